"""``python -m flood``: see :mod:`flood.cli`."""

import sys

from .cli import main

sys.exit(main())
