"""The inverse solver: from a wanted blink to ranked, buildable circuits.

For every admissible circuit (core, stage, buffering, polarity, chip family) the
solver searches standard values and ranks what it finds.

The search, per topology
------------------------
1. **Timing network.** The core's values sweep the whole grid of series values in
   the allowed ranges with the bare timing evaluation (``fast.periods``). Where a
   core has two resistors the sweep is split along the physics: for the steered
   Schmitt core R1·C1 sets the slow phase and R2 the fast one; for the 555 RB·C1
   sets the low phase and RA then the period. The short phase aims at the flash
   (or at the dark time, for a flash longer than half the period), so a direct
   LED stage can be lit in the short phase. The best few dozen timing networks
   are kept, at most two per capacitor value, so small and large capacitors both
   reach the next step.
2. **Stage.** The stage's values sweep their grid with full evaluation at the best
   timing network: coarsely first (one value per E3 step), then every series value
   around the best coarse points.
3. **Together.** The kept timing networks and stage values are crossed and
   evaluated in full (``fast.evaluate``), so an unbuffered stage that loads the
   timing gate's output shifts the timing here, before ranking.

The score
---------
Lower is better. For each stated aim, ``(ln(figure/aim))²/sigma²`` with sigma = ln 1.1 (a
10 % miss, about one E24 step, costs 1). Assumed aims (a flash of 50 ms, a 5 mA
peak, when the request does not say) cost at most 20, flattening out beyond a factor
of about two, so they guide without pulling a stated aim off. The period term adds
the expected squared spread of the period: resistor and capacitor tolerance, the
capacitor's drift over -20..+50 °C and its aging (a class-2 ceramic is evaluated at
the value left under its DC bias), the shift the guaranteed-maximum pin and capacitor
leakage causes at 25 °C, the chip's thresholds (median at the typical value, limits
at the 0.1 %/99.9 % points), and, for a supply range, the change from full to end of
night (the others taken as uniform within their bounds: variance bound²/3).
A timing network that stalls with the hot-end maximum leakage costs 3 more. An
electrolytic timing capacitor, a resistor near the leakage limit or a chip with
wide thresholds so ranks lower. Then one point per decade of energy per flash
(lower is better for a solar build) and 0.1 per part. A circuit whose LED stays
dark at the design supply, or that is outside its chip's supply range, costs 10^6
more (more than any fit), so it is only ever the nearest figure of a request that
gets nothing.

Never offered: a circuit that stalls; one whose nominal LED peak is above the LED's
rating (:func:`led_current_limit`); and one whose timing capacitor's typical leakage
comes within a factor of ten of the current that moves it at a threshold (charging
at VT+, discharging at VT-; common practice), checked on the bare
timing network and again with the phases as the LED stage's load stretches them.

The search aims at the median build, not the typical chip: every network is evaluated
with the switching levels of the median chip of its core (:func:`aim_levels`,
:mod:`pulsepick.analysis.median`). The Monte Carlo spread draws the thresholds with the
typical value as the median and the limits as the 0.1 %/99.9 % points; the period is
non-linear in them and the hysteresis window cuts the draw, so where the typical value
sits near one limit (HC VT+ at 3 V) the typical chip's period is several per cent off
the median build's. With a supply range the builds also take their supply from it, and
the levels at the full supply are those of the median over chips and supplies (a Schmitt
gate's thresholds do not follow the supply in proportion; the night cost still measures
the drift against the full supply's own median chip). The candidate's figures are the
median chip's, and the reference engine checks them at the same levels; :func:`assess`
adds a ``median_note`` when the Monte Carlo median still moves off them (lopsided parts).

The best circuit of each different topology (core and stage) is offered, so the
list is not five near-copies, and each is verified with the reference engine (see
:func:`assess`).

The package, by job
-------------------
- :mod:`~pulsepick.solve.types`: the results (:class:`Candidate`, :class:`SolveResult`).
- :mod:`~pulsepick.solve.space`: the search space (value grids, circuit variants, aimed levels).
- :mod:`~pulsepick.solve.score`: the score (error units, weights, penalties, limits).
- :mod:`~pulsepick.solve.search`: the search over standard values for one topology.
- :mod:`~pulsepick.solve.timingsearch`: its timing-network searches, one per core's kind.
- :mod:`~pulsepick.solve.solver`: :func:`solve`, the searches run and ranked.
- :mod:`~pulsepick.solve.explain`: why a request cannot be met.
- :mod:`~pulsepick.solve.assessment`: :func:`assess`, the checks of each offered candidate.
- :mod:`~pulsepick.solve.build`: several lights in one build (:func:`solve_build`).
- :mod:`~pulsepick.solve.texts`: figures as words.

This module re-exports the names the rest of the program imports from ``pulsepick.solve``.
"""

from __future__ import annotations

from pulsepick.request import ASSUMED_PEAK_A
from pulsepick.solve.assessment import assess, median_note  # noqa: F401
from pulsepick.solve.build import BuildResult, LightPick, solve_build
from pulsepick.solve.explain import _prechecks  # noqa: F401
from pulsepick.solve.score import (  # noqa: F401
    LEAK_MARGIN,
    MISS_FACTOR,
    MISS_KEYS,
    PREFER_WEIGHTS,
    SIGMA,
    led_current_limit,
    misses,
    n_parts,
    peak_needed,
)
from pulsepick.solve.solver import solve
from pulsepick.solve.space import aim_env, aim_levels, stage_cap_kind  # noqa: F401
from pulsepick.solve.texts import FIGURE_WORDS, figure_text, time_text  # noqa: F401
from pulsepick.solve.types import Candidate, SolveResult

__all__ = [
    "ASSUMED_PEAK_A", "BuildResult", "Candidate", "LightPick", "SolveResult", "assess",
    "n_parts", "solve", "solve_build", "stage_cap_kind",
]
