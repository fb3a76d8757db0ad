"""``python -m nmrcalc``: the command line."""

import sys

from nmrcalc.cli import main

sys.exit(main())
