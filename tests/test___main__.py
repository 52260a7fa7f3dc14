"""``python -m pacing`` starts the command line (pacing.__main__)."""

from __future__ import annotations

import subprocess
import sys

import pacing


def test_python_dash_m_pacing_prints_the_version():
    result = subprocess.run([sys.executable, "-m", "pacing", "--version"], capture_output=True,
                            text=True, timeout=120)
    assert result.returncode == 0
    assert result.stdout.strip() == f"pacing {pacing.__version__}"
