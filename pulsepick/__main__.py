"""Allow ``python -m pulsepick``."""

from pulsepick.cli import run

run()
