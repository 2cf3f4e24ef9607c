"""``python -m core``: the command line."""

import sys

from core.cli import main

sys.exit(main())
