"""``python -m sheetgen``: the same command line as the ``sheetgen`` script."""

import sys

from sheetgen.cli import main

sys.exit(main())
