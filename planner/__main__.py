"""``python -m planner``: the ``tubeplan`` command."""

import sys

from planner.cli import main

sys.exit(main())
