"""The library panel's tables and captions (ui.library_tables): a saved plan says which version
of pacing made it, and warns when that is another version than this one.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py
    sys.path.insert(0, str(ROOT))

from ui import library_tables  # noqa: E402


def test_a_saved_plan_says_which_pacing_made_it(monkeypatch):
    import types

    import pacing

    monkeypatch.setattr(pacing, "__version__", "0.2.0")
    same = types.SimpleNamespace(library_version="0.2.0")
    older = types.SimpleNamespace(library_version="0.1.0")
    assert library_tables.version_caption(same) == "made with pacing 0.2.0"
    caption = library_tables.version_caption(older)
    assert caption.startswith("made with pacing 0.1.0; this is pacing 0.2.0")
    assert "other numbers" in caption
