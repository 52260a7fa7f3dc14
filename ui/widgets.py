"""Input widgets that keep SI values while showing the chosen unit system.

Each unit-bearing input keeps its SI value in ``st.session_state["si:" + key]``; the widget
itself is keyed per unit system, so switching metric/imperial re-creates it showing the same
physical value in the new units.
"""

from __future__ import annotations

import math

import streamlit as st

from pacing.display.units import from_display, to_display, unit_label


def _decimals(step: float) -> int:
    """Decimals to show for an input's step in display units (0.05 → 2, 5 → 0)."""
    return max(0, -int(math.floor(math.log10(step)))) if step < 1 else 0


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
    # No min_value/max_value on the widget: Streamlit would silently put an out-of-range
    # number back to the default; the range is checked here and said in the page instead.
    value = container.number_input(
        text, value=float(shown), step=float(step),
        format=f"%.{digits}f", key=f"{key}:{system}", help=f"{help + '; ' if help else ''}"
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
