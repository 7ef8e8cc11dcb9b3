"""``python -m balance``: the same as the ``balance`` command."""

import sys

from balance.cli import main

sys.exit(main())
