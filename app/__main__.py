"""``python -m app``: the same as the ``swathe`` command (workbench, or a subcommand)."""

import sys

from app.cli import main

sys.exit(main())
