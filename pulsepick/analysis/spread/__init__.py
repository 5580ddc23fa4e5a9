"""Tolerance spread of a design: seeded Monte Carlo, worst-case corners, linearised propagation.

Three independent views of how a real build of one :class:`~pulsepick.design.Design`
varies from its nominal figures:

``spread``
    A seeded Monte Carlo over the parts' tolerances, the ambient temperature, the
    chip's thresholds and output resistance, and the supply, with the share of the
    period's variance each source causes (one source at a time) and worst-case corners
    alongside. Every build of every run, and every corner, goes through ONE vectorised
    fast-engine call.
``linearised``
    First-order propagation: finite-difference sensitivities of the fast engine at the
    mean of every input, combined in quadrature with each input's standard deviation.
    It shares no random numbers with the Monte Carlo and serves as its check.

Distributions (all bounds come from tables; no source publishes a distribution, so
common practice is followed: a value known only by its limits is uniform between them,
and a threshold given as min/typ/max has its median at the typical value and its limits
as the 0.1 % / 99.9 % points, so the Monte Carlo's median build is the typical chip):

* resistors: uniform within the tolerance of their series (E12 10 %, E24 5 %, E96 1 %;
  ref:iec-60063, ref:e-series-tolerances); each resistor drawn on its own;
* capacitors: uniform within the (possibly asymmetric) tolerance of their kind
  (``data/parts/capacitor_kinds.csv``); each capacitor drawn on its own;
* temperature: one ambient temperature per build, uniform over the outdoor range, the
  same for every part of the build. Capacitors follow their dielectric: linear kinds
  with a tempco drawn per part within the kind's spread, class-2 and electrolytic kinds
  their typical curve (the guaranteed band is used by the corners). Resistors get a
  tempco drawn per part within +/-``RESISTOR_TEMPCO_PPM_PER_K`` (estimate);
* chip thresholds: ONE draw per build for the whole package (gates of one package move
  together). VT+ and VT- are each a split normal truncated at the limits, median at
  the typical value, limits at the 0.1 % / 99.9 % points (``pulsepick.analysis.chipspread``,
  common practice), at the build's supply, restricted to the hysteresis window VH
  min..max (common practice: limits taken independently would overstate the spread).
  The limits in our tables hold over the datasheet's temperature range, so the
  thresholds' own temperature drift is inside this draw. For the CMOS 555 the
  threshold and trigger ratios are drawn the same way, independently;
* output resistance: one draw per package, uniform between typical and maximum (the
  same fraction for the high and low side);
* supply: uniform over ``supply_range_v`` if given, else the nominal supply.

Not in the spread: class-2 DC-bias loss and aging (systematic shifts, not tolerances),
and the growth of leakage with temperature.

References
----------
.. [1] IEC 60063 series tolerances (ref:iec-60063, ref:e-series-tolerances).
.. [2] NXP 74HC1G14 Table 7 (ref:nxp-74hc1g14) and the other threshold tables, via
   ``data/parts/logic_thresholds.csv``; CMOS 555 ratios via ``data/parts/timers.csv``.
.. [3] Capacitor kinds: ``data/parts/capacitor_kinds.csv`` (ref:holystone-mlcc to ref:maxim-an5527).

The package, by job
-------------------
- :mod:`~pulsepick.analysis.spread.tolerances`: sources, defaults, each part's tolerance.
- :mod:`~pulsepick.analysis.spread.chipdraws`: the chip's threshold limits and draws.
- :mod:`~pulsepick.analysis.spread.builds`: seeded draws and batched evaluation of builds.
- :mod:`~pulsepick.analysis.spread.corners`: worst-case corners.
- :mod:`~pulsepick.analysis.spread.montecarlo`: :func:`spread`, :class:`SpreadResult`.
- :mod:`~pulsepick.analysis.spread.linear`: :func:`linearised`, :class:`LinearisedResult`.
- :mod:`~pulsepick.analysis.spread.bands`: :func:`tolerance_bands`, :class:`BandsResult`.

This module re-exports the names the rest of the program imports from
``pulsepick.analysis.spread``.
"""

from __future__ import annotations

from pulsepick.analysis.spread.bands import (  # noqa: F401
    BAND_CAP_CLASSES,
    BAND_SERIES,
    BandCell,
    BandsResult,
    tolerance_bands,
)
from pulsepick.analysis.spread.builds import (  # noqa: F401
    CHUNK_BUILDS,
    SAMPLES_ALL_UP_TO,
    _Batch,
    _draw,
    _evaluate,
    _run_batch,
    _temperature_factors,
)
from pulsepick.analysis.spread.chipdraws import (  # noqa: F401
    threshold_polygon,
)
from pulsepick.analysis.spread.linear import (  # noqa: F401
    LinearisedResult,
    linearised,
)
from pulsepick.analysis.spread.montecarlo import (  # noqa: F401
    SpreadResult,
    spread,
)
from pulsepick.analysis.spread.tolerances import (  # noqa: F401
    DEFAULT_BUILDS,
    DEFAULT_TEMP_RANGE_C,
    DEFAULT_YIELD_BAND,
    FIGURE_KEYS,
    QUANTILE_LEVELS,
    RESISTOR_TEMPCO_PPM_PER_K,
    SHARE_BUILDS,
    SOURCES,
    SOURCE_LABELS,
    TEMP_RANGE_TEXT,
    T_REF_C,
    Z95,
    PartTolerance,
    part_tolerances,
)
