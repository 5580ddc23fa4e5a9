"""The defaults and choices of a request, and the phrases quoted in errors (see
:mod:`pulsepick.request`).
"""

from __future__ import annotations

from pulsepick.circuits.base import core_names, stage_names


#: Phrases that work, quoted in every error about an unreadable phrase.
PHRASE_EXAMPLES = (
    "one flash every 3 s",
    "flash every 2.5 s for 40 ms, 5 mA peak",
    "20 flashes a minute, 0.1 s long, as bright as a steady 1 mA",
    "every 4 s, 200 mcd",
)

# --- defaults (all shown in the output as assumptions) ---------------------------------------
DEFAULT_SUPPLY = "3.0V"  # common practice: two cells or a charged supercap near 3 V
#: Common practice: the 74HC14 is the usual Schmitt inverter and the CMOS 555 the usual
#: timer for a low-power flasher (common practice).
DEFAULT_FAMILY = "hc,timer555"
DEFAULT_LED = "red"  # lowest forward voltage in our table: lights to the end of a night
DEFAULT_R_SERIES = "E24"  # common practice: 5 % resistors are the everyday kind
DEFAULT_C_SERIES = "E12"  # common practice: film and ceramic capacitors come in E12
DEFAULT_TIMING_CAP = "any"
DEFAULT_R_RANGE = ("1k", "10M")  # common practice; above 10 Mohm leakage and dirt take over
DEFAULT_CAP_RANGE = "1n..1m"
DEFAULT_TOP = 5
#: How much the ranking weighs a part's size and cost class against its figures:
#: "figures" not at all, "balanced" a tie-breaker, "compact" strongly.
PREFER_CHOICES = ("figures", "balanced", "compact")
DEFAULT_PREFER = "balanced"
DEFAULT_BUILDS = 2000
DEFAULT_SEED = 0
#: Flash length assumed when the request states none, s. Design choice (estimate): a
#: short flash that still reads as a flash; short flashes save energy (common practice).
ASSUMED_FLASH_S = 0.05
#: When the request states no flash and the assumed one would take more than this share
#: of the period, the flash aimed at is this share of the period instead. Design choice
#: (estimate): a quarter of the period still reads as a flash rather than a light that
#: goes off now and then.
ASSUMED_FLASH_SHARE = 0.25
#: Peak LED current assumed when the request states no brightness, A. Estimate: a few
#: milliamperes are plainly visible at night from a standard LED, and the 20 mA habit
#: wastes stored energy (common practice).
ASSUMED_PEAK_A = 5e-3

#: What --family accepts (a comma list): the logic families, the CMOS 555, or any.
FAMILY_CHOICES = ("hc", "ahc", "lvc", "4000n", "4000w", "timer555", "any")
#: What --timing-cap accepts, and the capacitor kinds each word stands for.
TIMING_CAP_CHOICES: dict[str, tuple[str, ...]] = {
    "film": ("film-pet", "film-pp"),
    "c0g": ("c0g",),
    "x7r": ("x7r",),
    "electrolytic": ("electrolytic",),
    "any": ("film-pet", "film-pp", "c0g", "x7r", "electrolytic"),
}
#: Dielectric words accepted in a stock file (a capacitor kind or "film").
STOCK_DIELECTRICS = ("film", "film-pet", "film-pp", "c0g", "x7r", "x5r", "y5v",
                     "electrolytic", "tantalum")
CORE_CHOICES = core_names()
STAGE_CHOICES = stage_names()


def _quote(text: str) -> str:
    return '"' + text.strip() + '"'


def _examples() -> str:
    return "; phrases that work: " + ", ".join(_quote(p) for p in PHRASE_EXAMPLES[:3])


