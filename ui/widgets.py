"""Input widgets that keep SI values while showing the chosen unit system.

Each unit-bearing input keeps its SI value in ``st.session_state["si:" + key]``; the widget
itself is keyed per unit system, so switching metric/imperial re-creates it showing the same
physical value in the new units.

This module is the one place that owns the inputs' state. Values put into the page from
elsewhere (the library's "Use in the page" and "Show in the page") go through `set_inputs`:
it sets the SI store and marks the input, and the input's widget value is set from it the
next time the input is drawn, before the widget is created. Only setting the widget's own
value makes the browser show it: a widget keyed by the user is identified by its key alone,
so the browser keeps showing (and sends back on the next edit) whatever it held before.
"""

from __future__ import annotations

import math

import streamlit as st

from pacing.display.units import from_display, to_display, unit_label


def _decimals(step: float) -> int:
    """Decimals to show for an input's step in display units, as many as the step has
    (0.05 → 2, 0.25 → 2, 5 → 0): 1013.25 hPa is shown as 1013.25, not 1013.2."""
    from decimal import Decimal

    exponent = Decimal(repr(float(step))).normalize().as_tuple().exponent
    return max(0, -int(exponent)) if isinstance(exponent, int) else 0


PENDING = "widgets:pending"
"""Session key: the inputs whose widgets must show their SI store's value when next drawn."""


def set_inputs(values: dict[str, float], widgets: dict | None = None) -> None:
    """Put values into the page's inputs (in a button's callback, or before the inputs are
    drawn): each SI store ``"si:<key>"`` is set and its input marked, so that `unit_number`
    (or the flat pace's text input, ui.sections) sets the widget's own value when it next
    draws it (`take_pending`).

    Parameters
    ----------
    values : dict
        Input key (as given to `unit_number`) → value in the input's SI store [SI].
    widgets : dict or None
        Other widgets' session keys → values (radios, choices, text inputs), set as they
        are (Streamlit shows a value set in session state before the widget is drawn).
    """
    pending = set(st.session_state.get(PENDING, ()))
    for key, value in values.items():
        st.session_state[f"si:{key}"] = float(value)
        pending.add(key)
    st.session_state[PENDING] = pending
    for key, value in (widgets or {}).items():
        st.session_state[key] = value


def take_pending(key: str, system: str) -> bool:
    """True once when the input `key` was given a value by `set_inputs` since it was last
    drawn; its widgets in both unit systems are forgotten (the other one is re-made)."""
    pending = st.session_state.get(PENDING) or set()
    if key not in pending:
        return False
    st.session_state[PENDING] = set(pending) - {key}
    for other in ("metric", "imperial"):
        if other != system:
            st.session_state.pop(f"{key}:{other}", None)
    return True


def unit_number(label: str, quantity: str | None, system: str, key: str, default: float,
                low: float, high: float, step: float, help: str | None = None,
                container=st) -> float:
    """A number input in display units; returns the SI value.

    Parameters
    ----------
    label : text before the unit, e.g. "Rider mass"; the unit is appended in brackets.
    quantity : pacing.display.units quantity ("mass", "speed", ...) or None for a unitless or
        SI-only number (then `label` should carry its unit).
    default, low, high : default and limits in SI units.
    step : increment in display units.
    """
    store = f"si:{key}"
    si_value = st.session_state.get(store, default)
    if quantity is None:
        shown, lo, hi, text = si_value, low, high, label
    else:
        shown = to_display(si_value, quantity, system)
        lo, hi = sorted((to_display(low, quantity, system), to_display(high, quantity, system)))
        text = f"{label} [{unit_label(quantity, system)}]"
    digits = _decimals(step)
    lo, hi = round(lo, digits), round(hi, digits)
    shown = min(max(round(shown, digits), lo), hi)
    widget = f"{key}:{system}"
    if take_pending(key, system):
        st.session_state[widget] = float(shown)  # the browser shows the value set
    # No min_value/max_value on the widget: Streamlit would silently put an out-of-range
    # number back to the default; the range is checked here and said in the page instead.
    # The value is given only to a widget without state (never both: Streamlit warns).
    value = container.number_input(
        text, value=None if widget in st.session_state else float(shown), step=float(step),
        format=f"%.{digits}f", key=widget, help=f"{help + '; ' if help else ''}"
        f"allowed {lo:.{digits}f} to {hi:.{digits}f}",
    )
    if value is None:
        return si_value
    if not (math.isfinite(value) and lo <= round(value, digits) <= hi):
        container.error(out_of_range_message(text, value, lo, hi, shown, digits), icon="⚠️")
        return si_value
    new_si = value if quantity is None else from_display(value, quantity, system)
    if round(value, digits) != round(shown, digits):
        st.session_state[store] = new_si
        return new_si
    return si_value


def out_of_range_message(label: str, value: float, low: float, high: float, kept: float,
                         digits: int) -> str:
    """One line for a number outside its input's range, saying what the page uses instead:
    "Average power [W]: 2000 is outside 30 to 800; the page keeps 240"."""
    def shown(number: float) -> str:
        return f"{number:.{digits}f}" if math.isfinite(number) else str(number)

    return (f"{label}: {shown(value)} is outside {shown(low)} to {shown(high)}; the page "
            f"keeps {shown(kept)}")
