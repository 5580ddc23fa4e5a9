"""Several lights in one build: gates and packages, lock risk, spread-out periods, one budget.

Gates and packages
------------------
A hex Schmitt-inverter package holds six gates (74HC14, 74AHC14, 74LVC14A, CD40106B; common
practice, ``pulsepick.parts.logic.GATES_PER_PACKAGE``). Each Schmitt oscillator takes one
gate, each buffer one more, and the dusk detector's sense input one. Only lights of the
same logic family share a package. A CMOS 555 is one package per light.

Lock risk
---------
Oscillators on one package share its supply pin, ground and substrate, and two of them
tuned near each other, or near a simple ratio, pull into step (injection locking; two
oscillators on one chip "tend to self-synchronize", common practice). A pair is at risk
when the ratio of its periods, shorter to longer, comes within ``margin`` (3 % by default,
an estimate of "a few percent", common practice) of a simple ratio p:q with
q <= 4 — 1:4, 1:3, 1:2, 2:3, 3:4, 1:1 — either at the nominal periods or anywhere in the
pair's P5..P95 band.

The band of a pair is the P5..P95 of the ratio over builds in which each light's own parts
vary independently (their tolerances: seeded Monte Carlo of
``pulsepick.analysis.spread`` with resistors and capacitors varying). The chip's thresholds
and output resistance, the supply and the ambient temperature are shared by every light on
the package and move all their periods together, leaving the ratio alone to first order,
so they are held at nominal for this band (their spread is far wider than the ratio's).

Spread-out periods
------------------
:func:`spread_out` moves each light's period within a tolerance of what was asked (10 %
by default) so every pair on a package keeps its band away from those ratios. Each light
gets the periods its own circuit can reach with standard values near its solved ones
(timing resistors and capacitor stepped along their E-series, keeping the flash and the
LED current within 15 %); a coordinate search over those choices maximises the smallest
clearance and then stays as close as it can to the periods asked. Its starting points
include golden-ratio offsets: stepping by the golden ratio's fractional part spreads
points as evenly as possible and never repeats a simple ratio (irrational spacing).

One budget
----------
:func:`combined_load_curve` adds the lights' load curves into one for the night model.

The package, by job: ``packages`` (gates, packages and the build's parts list),
``ratios`` (simple ratios, clearance, lock risk of the pairs), ``spreadout`` (period
variants and the spread-out search), ``budget`` (one load curve for the night).
"""

from pulsepick.analysis.multi.budget import combined_load_curve, with_values
from pulsepick.analysis.multi.packages import (
    PLAN_BAND,
    LightUse,
    Package,
    PackagePlan,
    build_part_lines,
    package_limit_error,
    plan_packages,
)
from pulsepick.analysis.multi.ratios import (
    DEFAULT_LOCK_MARGIN,
    MAX_RATIO_Q,
    PairRisk,
    clearance,
    lock_risks,
    nearest_ratio,
    pair_band,
    simple_ratios,
)
from pulsepick.analysis.multi.spreadout import (
    BAND_BUILDS,
    CLEARANCE_CUSHION,
    DEFAULT_PERIOD_TOLERANCE,
    GOLDEN,
    VARIANT_FIGURE_FACTOR,
    VARIANT_VALUE_FACTOR,
    PeriodOptions,
    SpreadOutChoice,
    choose_periods,
    golden_periods,
    period_options,
    ratio_samples,
)

__all__ = [
    "BAND_BUILDS", "CLEARANCE_CUSHION", "DEFAULT_LOCK_MARGIN", "DEFAULT_PERIOD_TOLERANCE",
    "GOLDEN", "MAX_RATIO_Q", "PLAN_BAND", "VARIANT_FIGURE_FACTOR", "VARIANT_VALUE_FACTOR",
    "LightUse", "Package", "PackagePlan", "PairRisk", "PeriodOptions", "SpreadOutChoice",
    "build_part_lines", "choose_periods", "clearance", "combined_load_curve",
    "golden_periods", "lock_risks", "nearest_ratio", "package_limit_error", "pair_band",
    "period_options", "plan_packages", "ratio_samples", "simple_ratios", "with_values",
]
