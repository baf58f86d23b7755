"""``python -m stimlab.cli``: the same as the ``stimlab`` command."""

import sys

from .main import main

sys.exit(main())
