"""``python -m splitting.cli`` runs the command line."""

import sys

from ._main import main

sys.exit(main())
