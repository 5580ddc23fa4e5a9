"""``--chip-spread``: how the chips' threshold limits are read (solve, check, bands).

Kept apart from the circuit options so that declaring it imports nothing heavy.
"""

from __future__ import annotations

from pulsepick.errors import RequestError

CHIP_SPREAD_HELP = ("how the chips' datasheet threshold limits are read in the spread: "
                    "normal (the default: the typical value is the median chip, the limits "
                    "the 0.1 %% and 99.9 %% points), or for worst-case studies uniform (every "
                    "value between the limits alike) or triangle (peaked at the typical "
                    "value, down to zero at the limits)")


def add_chip_spread_argument(parser, what: str = "") -> None:
    """``--chip-spread normal|uniform|triangle`` (``what`` ends the help text)."""
    parser.add_argument("--chip-spread", metavar="SHAPE", help=CHIP_SPREAD_HELP + what)


def chip_spread_choice(text: str) -> str:
    """The ``--chip-spread`` shape, or one line saying what is accepted."""
    from pulsepick.engine.environment import CHIP_SPREADS

    shape = text.strip().lower()
    if shape not in CHIP_SPREADS:
        raise RequestError(f"--chip-spread {text!r}: accepted {', '.join(CHIP_SPREADS)}")
    return shape
