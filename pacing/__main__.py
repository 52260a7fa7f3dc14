import sys

from pacing.cli import main

sys.exit(main())
