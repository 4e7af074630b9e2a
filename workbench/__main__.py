"""``python -m workbench``: the ``workbench`` command line."""

import sys

from workbench.interfaces.cli import main

sys.exit(main())
