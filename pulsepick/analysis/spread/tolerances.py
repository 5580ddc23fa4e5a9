"""Where a build varies: the sources of variation, the defaults, and each part's tolerance
(see :mod:`pulsepick.analysis.spread`).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from pulsepick.circuits.base import get_core, get_stage
from pulsepick.design import Design
from pulsepick.errors import RequestError
from pulsepick.parts.capacitor import get_cap_kind
from pulsepick.series import get_series, which_series


#: Sources of variation, in report order.
SOURCES = (
    "resistors",
    "capacitors",
    "temperature",
    "chip_thresholds",
    "output_resistance",
    "supply",
)
SOURCE_LABELS = {
    "resistors": "resistor tolerance",
    "capacitors": "capacitor tolerance",
    "temperature": "temperature",
    "chip_thresholds": "chip thresholds",
    "output_resistance": "output resistance",
    "supply": "supply",
}
#: Figures summarised per build.
FIGURE_KEYS = ("period_s", "flash_s", "led_peak_a", "effective_a", "effective_mcd",
               "supply_avg_a")
QUANTILE_LEVELS = (5.0, 50.0, 95.0)  # percent
DEFAULT_BUILDS = 2000
DEFAULT_TEMP_RANGE_C = (-20.0, 50.0)  # C, outdoor range of a garden light (common practice)
#: The same range as text, for reports.
TEMP_RANGE_TEXT = f"{DEFAULT_TEMP_RANGE_C[0]:g}..{DEFAULT_TEMP_RANGE_C[1]:g} °C"
DEFAULT_YIELD_BAND = 0.10  # +/- fraction of the target period counted as a good build
#: Resistor temperature coefficient, +/- ppm/K around zero: ESTIMATE (metal-film parts are
#: commonly sold at 50-100 ppm/K, carbon film is worse; common practice).
RESISTOR_TEMPCO_PPM_PER_K = 100.0
T_REF_C = 25.0  # C, reference temperature of tolerances and tempcos
#: Resistor values in one of these series take its tolerance; a value in E24 (and so
#: every E12/E6 value) is taken as a 5 % part, how such values are stocked today
#: (common practice). A value in no series is also taken as 5 %.
_INFER_SERIES = ("E24", "E48", "E96", "E192")
_FALLBACK_SERIES = "E24"
#: Standard normal 95 % quantile (scipy.stats.norm.ppf(0.95)).
Z95 = 1.6448536269514722
_EDGE_SAMPLES = 5  # points along each hysteresis-limited edge of the threshold polygon
_SUPPLY_SAMPLES = 3  # evenly spaced corner supplies across a supply range
#: Builds of each one-source-at-a-time run (the first ones of the full run's draws): the
#: variance of 500 builds is within about 6 % (sqrt(2/500)), plenty for a share.
SHARE_BUILDS = 500
_EPS_V = 1e-12  # V, slack on the hysteresis test (a measured chip pins VH exactly)
_MOMENT_GRID = 400  # quadrature points per side for the chip draw's moments


# ----------------------------------------------------------------------------- inputs

@dataclass(frozen=True)
class PartTolerance:
    """The tolerance of one resistor or capacitor of the design."""

    name: str  # parameter name (r1, c1, cp, ...)
    kind: str  # "R" or "C"
    tol_minus_pct: float  # %, lower tolerance (positive number)
    tol_plus_pct: float  # %, upper tolerance
    cap_kind: str | None = None  # capacitor kind key (capacitors only)
    origin: str = ""  # where the tolerance came from

    def __post_init__(self) -> None:
        ok = (math.isfinite(self.tol_minus_pct) and math.isfinite(self.tol_plus_pct)
              and 0 <= self.tol_minus_pct < 100 and self.tol_plus_pct >= 0)
        if not ok:
            raise RequestError(
                f"tolerance of {self.name.upper()} -{self.tol_minus_pct:g}/+{self.tol_plus_pct:g} "
                "%: accepted is 0 <= minus < 100 and plus >= 0 percent"
            )


def _params(design: Design):
    topo = design.topo
    return get_core(topo.core).params + get_stage(topo.stage).params


def _cap_kind_key(design: Design, name: str) -> str:
    return design.parts.timing_cap if name == "c1" else design.parts.stage_cap


def _pair(value: Any, what: str) -> tuple[float, float]:
    """A tolerance given as a number (symmetric) or (minus, plus), percent."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value), float(value)
    if isinstance(value, (tuple, list)) and len(value) == 2:
        return float(value[0]), float(value[1])
    raise RequestError(f"tolerance for {what} {value!r}: accepted a percentage such as 5 or "
                       "(minus, plus) such as (20, 80)")


def _per_part(given: Any, names: list[str], what: str) -> dict[str, Any]:
    """Spread a scalar over ``names`` or check a mapping's keys (unknown keys refused)."""
    if given is None:
        return {}
    if isinstance(given, Mapping):
        extra = sorted(set(given) - set(names))
        if extra:
            raise RequestError(f"{what} tolerance given for {', '.join(extra)}, which the design "
                               f"does not have (it has {', '.join(names) or 'none'})")
        return dict(given)
    return {n: given for n in names}


@functools.lru_cache(maxsize=4096)
def _inferred_tolerance(value: float) -> tuple[float, str]:
    held = [s for s in _INFER_SERIES if s in which_series(value)]
    series = held[0] if held else _FALLBACK_SERIES
    origin = f"{series} value" if held else "value in no series, taken as E24"
    return get_series(series).tolerance_pct, origin


def part_tolerances(design: Design, resistor_tol_pct=None, cap_tol=None
                    ) -> tuple[PartTolerance, ...]:
    """The tolerance of every resistor and capacitor of ``design``.

    Parameters
    ----------
    resistor_tol_pct : None, float or mapping name -> float
        Percent. None infers each resistor's series from its value: a value in E24 (so
        also every E12/E6 value) is a 5 % part, one found only in E48/E96/E192 takes
        that series' tolerance (ref:e-series-tolerances); a value in no series is taken as 5 %.
    cap_tol : None, float, (minus, plus) or mapping name -> either
        Percent. None takes the usual tolerance of each capacitor's kind.
    """
    params = [p for p in _params(design) if design.values.get(p.name, 0.0) > 0]
    r_names = [p.name for p in params if p.kind == "R"]
    c_names = [p.name for p in params if p.kind == "C"]
    r_given = _per_part(resistor_tol_pct, r_names, "resistor")
    c_given = _per_part(cap_tol, c_names, "capacitor")
    out = []
    for p in params:
        value = float(design.values[p.name])
        if p.kind == "R":
            if p.name in r_given:
                tol = _pair(r_given[p.name], p.name.upper())
                origin = "given"
            else:
                pct, origin = _inferred_tolerance(value)
                tol = (pct, pct)
            out.append(PartTolerance(p.name, "R", tol[0], tol[1], None, origin))
        else:
            key = _cap_kind_key(design, p.name)
            kind = get_cap_kind(key)
            if p.name in c_given:
                tol = _pair(c_given[p.name], p.name.upper())
                origin = "given"
            else:
                tol = (kind.tol_minus_pct, kind.tol_plus_pct)
                origin = f"usual for {key}"
            out.append(PartTolerance(p.name, "C", tol[0], tol[1], key, origin))
    return tuple(out)


def _vary_set(vary: Iterable[str] | None) -> frozenset[str]:
    if vary is None:
        return frozenset(SOURCES)
    if isinstance(vary, str):
        vary = (vary,)
    out = frozenset(vary)
    unknown = sorted(out - set(SOURCES))
    if unknown:
        raise RequestError(f"unknown spread source {', '.join(unknown)}; accepted: "
                           f"{', '.join(SOURCES)}")
    return out


def _check_range(rng: Any, what: str, unit: str, positive: bool) -> tuple[float, float]:
    try:
        lo, hi = (float(x) for x in rng)
    except (TypeError, ValueError) as err:
        raise RequestError(f"{what} {rng!r}: accepted a pair (low, high) in {unit}") from err
    lo, hi = min(lo, hi), max(lo, hi)
    if not (math.isfinite(lo) and math.isfinite(hi)) or (positive and lo <= 0):
        raise RequestError(f"{what} {rng!r}: accepted two finite values in {unit}"
                           + (" above zero" if positive else ""))
    return lo, hi


# ----------------------------------------------------------------------- chip geometry
