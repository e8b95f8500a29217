"""Run the command line: ``python -m mottkit``."""

import sys

from .cli import main

sys.exit(main())
