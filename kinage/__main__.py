"""``python -m kinage``: the same as the ``kinage`` command."""

import sys

from .cli import main

sys.exit(main())
