"""``python -m splitting`` runs the command line."""

import sys

from .cli import main

sys.exit(main())
