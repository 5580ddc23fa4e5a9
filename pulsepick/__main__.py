"""Allow ``python -m pulsepick``."""

import sys

from pulsepick.cli import main

sys.exit(main())
