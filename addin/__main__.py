"""``python -m groundstep.addin`` runs the ``groundstep`` command line."""

import sys

from .cli import main

sys.exit(main())
