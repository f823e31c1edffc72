"""``python -m airgate`` runs the command-line interface."""

import sys

from airgate.cli import main

sys.exit(main())
