"""``python -m pacing COMMAND …``: the command line (pacing.cli.main); exits with its code."""

import sys

from pacing.cli import main

sys.exit(main())
