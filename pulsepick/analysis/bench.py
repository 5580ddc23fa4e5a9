"""From the bench back to the model: a chip's thresholds from a timed test oscillator.

A bare Schmitt RC oscillator (R from output to input, C from input to ground, the LED
on a spare gate so it does not load the timing gate) runs with a rail-to-rail output
at

    t_high = R·C·ln((V − VT−)/(V − VT+)),   t_low = R·C·ln(VT+/VT−)

(onsemi MC14106B datasheet, astable figure; ref:onsemi-mc14106b). With
a = e^(t_low/RC) and b = e^(t_high/RC) the two equations invert in closed form:

    VT− = V·(b − 1)/(a·b − 1),   VT+ = a·VT−.

:func:`invert_phases` applies that inversion; :func:`calibrate` refines it with the
fast engine (output resistance, leakage and the spare gate's input included) and
carries the timing resolution and the parts' tolerances into a range. The core here
never prints; ``pulsepick calibrate`` renders the result.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from pulsepick.circuits.base import Topology, core_names, get_core, get_stage, stage_names
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.errors import RequestError
from pulsepick.hints import hint
from pulsepick.parts.logic import FAMILY_KEYS, get_family

#: Standard normal quantile of 99.9 % (scipy.stats.norm.ppf(0.999)): the published
#: threshold limits are taken as the 0.1 % and 99.9 % points of the chip spread.
Z_LIMIT = 3.090232306167813
#: Probability below the lower limit (and above the upper one) before truncation.
LIMIT_TAIL = 0.001
#: Default stopwatch uncertainty, s (a hand-held stopwatch; common practice).
DEFAULT_RESOLUTION_S = 0.2
#: LED series resistor of the test oscillator's spare gate, ohm (about 1 mA; common practice).
TEST_LED_R_OHM = 1000.0
#: Refinement passes of the inversion through the fast engine (converges in 2-3).
_REFINE_PASSES = 5


def plain_schmitt_core() -> str:
    """Name of the registered core with one resistor and one capacitor on a Schmitt gate."""
    for name in core_names():
        core = get_core(name)
        kinds = sorted(p.kind for p in core.params if not p.optional)
        if core.chip_kind == "schmitt" and kinds == ["C", "R"] and len(core.params) == 2:
            return name
    raise RequestError("no plain Schmitt RC core is registered")


def led_only_stage() -> str:
    """Name of the registered stage that is just the LED and its series resistor."""
    for name in stage_names():
        params = get_stage(name).params
        if len(params) == 1 and params[0].kind == "R":
            return name
    raise RequestError("no plain LED stage is registered")


def invert_phases(t_high, t_low, rc, vdd):
    """Thresholds ``(VT+, VT−)`` (V) of a rail-to-rail Schmitt RC oscillator.

    Parameters
    ----------
    t_high, t_low : output high and low times, s (arrays broadcast).
    rc : R·C, s.
    vdd : supply, V.

    Derived from the astable closed form of the onsemi MC14106B datasheet
    (ref:onsemi-mc14106b); see the module docstring.
    """
    a = np.exp(np.asarray(t_low, dtype=float) / rc)
    b = np.exp(np.asarray(t_high, dtype=float) / rc)
    vt_minus = vdd * (b - 1.0) / (a * b - 1.0)
    return a * vt_minus, vt_minus


def closed_form_phases(vt_plus, vt_minus, rc, vdd):
    """``(t_high, t_low)`` in s of the rail-to-rail Schmitt RC oscillator (ref:onsemi-mc14106b)."""
    vt_plus = np.asarray(vt_plus, dtype=float)
    vt_minus = np.asarray(vt_minus, dtype=float)
    return (rc * np.log((vdd - vt_minus) / (vdd - vt_plus)), rc * np.log(vt_plus / vt_minus))


def limit_percentile(x: float, lo: float, typ: float, hi: float) -> float:
    """Where ``x`` sits in the chip spread between published limits, percent (0..100).

    The spread model: a split normal with the datasheet typical as median and the
    limits as its 0.1 % and 99.9 % points, truncated at the limits (estimate). A value
    outside the limits returns 0 or 100.
    """
    from pulsepick.analysis.chipspread import split_normal_cdf

    if x <= lo:
        return 0.0
    if x >= hi:
        return 100.0
    # the one chip-spread distribution (pulsepick.analysis.chipspread)
    return 100.0 * float(split_normal_cdf((x - lo) / (hi - lo), (typ - lo) / (hi - lo)))


def oscillator_design(family: str, r_ohm: float, c_f: float, supply_v: float, led: Any,
                timing_cap: str = "film-pet") -> Design:
    """The test oscillator: a plain Schmitt RC core, the LED lit on a spare gate while
    the timing output is high (so the lit time is the high time)."""
    topo = Topology(core=plain_schmitt_core(), stage=led_only_stage(), buffered=True,
                    lit="low")
    r_name, c_name = _core_value_names(topo.core)
    s_name = get_stage(topo.stage).params[0].name
    return Design(topo=topo, values={r_name: r_ohm, c_name: c_f, s_name: TEST_LED_R_OHM},
                  chip=ChipSpec(family), parts=PartChoice(led=led, timing_cap=timing_cap),
                  supply_v=supply_v)


def _core_value_names(core: str) -> tuple[str, str]:
    params = get_core(core).params
    return (next(p.name for p in params if p.kind == "R"),
            next(p.name for p in params if p.kind == "C"))


@dataclass(frozen=True)
class Timing:
    """The two measured phases of the test oscillator, with their uncertainty (s)."""

    high_s: float  # s, timing output high (LED lit)
    low_s: float  # s, timing output low (LED dark)
    high_unc_s: float  # s, +/- uncertainty of high_s
    low_unc_s: float  # s, +/- uncertainty of low_s
    how: str  # how the figures were given, in words

    def __post_init__(self) -> None:
        for name, t, u in (("lit (high)", self.high_s, self.high_unc_s),
                           ("dark (low)", self.low_s, self.low_unc_s)):
            if not (math.isfinite(t) and t > 0):
                raise RequestError(f"the {name} time must be above 0 s; check the period, "
                                   "high, low and duty figures")
            if not (math.isfinite(u) and u >= 0):
                raise RequestError("the timing resolution must be 0 s or more, e.g. 0.2s")
            if t <= u:
                raise RequestError(f"the {name} phase ({t:g} s) is not longer than its "
                                   f"uncertainty ({u:g} s); time more periods, or use a "
                                   f"larger R or C (see {hint('recipe', True)})")


@dataclass(frozen=True)
class Calibration:
    """Thresholds of one chip recovered from a timed test oscillator (SI units)."""

    design: Design  # the test oscillator as built (nominal parts, typical chip)
    timing: Timing  # what was measured
    r_tol_pct: float  # %, tolerance of R taken into the range
    c_tol_pct: tuple[float, float]  # %, (minus, plus) tolerance of C taken into the range
    vt_plus_v: float  # V
    vt_minus_v: float  # V
    vt_plus_range_v: tuple[float, float]  # V, over timing resolution and part tolerances
    vt_minus_range_v: tuple[float, float]  # V
    vt_plus_pct: float  # percentile of VT+ in the datasheet spread (0..100)
    vt_minus_pct: float  # percentile of VT- in the datasheet spread (0..100)
    limits_v: dict[str, tuple[float, float, float]]  # (min, typ, max) at the supply
    warnings: tuple[str, ...]
    assumptions: dict[str, Any]


def _refined(design: Design, t_high, t_low, rc_scale):
    """Fast-engine refinement of the closed-form inversion (arrays broadcast).

    Each pass takes the ratio of the closed-form phase to the fast engine's phase at the
    current thresholds and inverts the measured phases corrected by that ratio.
    """
    from pulsepick.engine import fast

    r_name, c_name = _core_value_names(design.topo.core)
    vdd = design.supply_v
    rc = design.values[r_name] * design.values[c_name] * np.asarray(rc_scale, dtype=float)
    t_high = np.asarray(t_high, dtype=float)
    t_low = np.asarray(t_low, dtype=float)
    vtp, vtm = invert_phases(t_high, t_low, rc, vdd)
    for _ in range(_REFINE_PASSES):
        vtp = np.clip(vtp, 1e-3 * vdd, 0.999 * vdd)
        vtm = np.clip(vtm, 1e-3 * vdd, 0.999 * vtp)
        env, _ = design.env(vt_plus=vtp, vt_minus=vtm)
        factor = design.timing_cap_factor(env)
        values = {**design.values, c_name: design.values[c_name] * rc_scale * factor}
        f = fast.evaluate(design.topo, values, env)
        th_c, tl_c = closed_form_phases(vtp, vtm, rc * factor, vdd)
        ok_h = np.isfinite(f.high_s) & (np.asarray(f.high_s) > 0)
        ok_l = np.isfinite(f.low_s) & (np.asarray(f.low_s) > 0)
        k_h = np.where(ok_h, th_c / np.where(ok_h, f.high_s, 1.0), 1.0)
        k_l = np.where(ok_l, tl_c / np.where(ok_l, f.low_s, 1.0), 1.0)
        vtp, vtm = invert_phases(t_high * k_h, t_low * k_l, rc * factor, vdd)
    return vtp, vtm


def calibrate(design: Design, timing: Timing, *, r_tol_pct: float = 1.0,
              c_tol_pct: tuple[float, float] = (5.0, 5.0)) -> Calibration:
    """VT+ and VT− of the chip in ``design`` (a :func:`oscillator_design`) from its timing.

    The range covers every corner of the timing uncertainty and the R and C
    tolerances (the thresholds are monotonic in each).

    Raises
    ------
    RequestError
        when the timing gives thresholds outside 0..supply or VT− above VT+.
    """
    fam = get_family(design.chip.family)
    vdd = design.supply_v
    vtp, vtm = (float(np.ravel(x)[0]) for x in _refined(design, timing.high_s, timing.low_s, 1.0))
    th = [timing.high_s - timing.high_unc_s, timing.high_s + timing.high_unc_s]
    tl = [timing.low_s - timing.low_unc_s, timing.low_s + timing.low_unc_s]
    rcs = [(1 - r_tol_pct / 100) * (1 - c_tol_pct[0] / 100), 1.0,
           (1 + r_tol_pct / 100) * (1 + c_tol_pct[1] / 100)]
    grid = np.array([(a, b, k) for a in th for b in tl for k in rcs])
    p_all, m_all = _refined(design, grid[:, 0], grid[:, 1], grid[:, 2])
    if not (np.all(np.isfinite(p_all)) and 0 < vtm < vtp < vdd):
        raise RequestError(f"these times give thresholds VT- {vtm:.3g} V, VT+ {vtp:.3g} V "
                           f"at {vdd:g} V; accepted: 0 < VT- < VT+ < supply. Check R, C, the "
                           "supply and which phase is lit")
    lim = fam.thresholds(vdd)
    limits = {"vt_plus": (float(lim.vt_plus_min), float(lim.vt_plus_typ),
                          float(lim.vt_plus_max)),
              "vt_minus": (float(lim.vt_minus_min), float(lim.vt_minus_typ),
                           float(lim.vt_minus_max))}
    warnings = []
    for key, value, word in (("vt_plus", vtp, "VT+"), ("vt_minus", vtm, "VT-")):
        lo, _, hi = limits[key]
        if not lo <= value <= hi:
            warnings.append(f"{word} {value:.3f} V lies outside the datasheet limits "
                            f"{lo:g}..{hi:g} V at {vdd:g} V: check R, C, the supply and the "
                            "family, or the chip is outside its specification")
    if not fam.in_range(vdd):
        warnings.append(f"the supply {vdd:g} V is outside the family's recommended "
                        f"{fam.vdd_min_v:g}..{fam.vdd_max_v:g} V")
    assumptions = {
        "resolution": timing.how,
        "r_tolerance_pct": r_tol_pct,
        "c_tolerance_pct": list(c_tol_pct),
        "spread_model": "split normal, datasheet typical as median, limits as the 0.1 % "
                        "and 99.9 % points, truncated at the limits (estimate)",
        "inversion": "rail-to-rail closed form (ref:onsemi-mc14106b) refined with the fast "
                     "engine",
    }
    return Calibration(
        design=design, timing=timing, r_tol_pct=r_tol_pct, c_tol_pct=tuple(c_tol_pct),
        vt_plus_v=vtp, vt_minus_v=vtm,
        vt_plus_range_v=(float(np.min(p_all)), float(np.max(p_all))),
        vt_minus_range_v=(float(np.min(m_all)), float(np.max(m_all))),
        vt_plus_pct=limit_percentile(vtp, *limits["vt_plus"]),
        vt_minus_pct=limit_percentile(vtm, *limits["vt_minus"]),
        limits_v=limits, warnings=tuple(warnings), assumptions=assumptions)


# ---------------------------------------------------------------- the test circuit recipe

#: The recipe aims at this period, s, with neither phase under RECIPE_MIN_PHASE_S, and
#: accepts RECIPE_PERIOD_S as the window (timeable by eye; common practice).
RECIPE_AIM_S = 6.0
RECIPE_PERIOD_S = (4.0, 10.0)
RECIPE_MIN_PHASE_S = 1.0
#: Timing resistors of the recipe, ohm: above a few megohm the input leakage starts to
#: count, below 100 kΩ the output resistance does (common practice).
RECIPE_R_RANGE_OHM = (100e3, 4.7e6)
RECIPE_C_RANGE_F = (100e-9, 10e-6)


@dataclass(frozen=True)
class Recipe:
    """A test oscillator that can be timed by eye (SI units)."""

    design: Design
    r_ohm: float
    c_f: float
    period_s: float  # s, with the family's typical thresholds
    high_s: float  # s
    low_s: float  # s
    from_stock: bool  # values taken from the user's drawer


def recipe(family: str, supply_v: float, led: Any, *, resistors=None, capacitors=None
           ) -> Recipe:
    """R and C for a test oscillator of about 6 s with both phases of at least 1 s.

    ``resistors`` / ``capacitors`` (ohm / farad) are the drawer's values; None takes
    E6 values. Raises :class:`RequestError` when no pair in the drawer fits.
    """
    from pulsepick.series import get_series

    if family not in FAMILY_KEYS:
        raise RequestError(f"calibrate measures a Schmitt chip; {hint('family')} takes one of "
                           f"{', '.join(FAMILY_KEYS)}")
    e6 = get_series("E6")
    rs = np.asarray(resistors if resistors else e6.values(*RECIPE_R_RANGE_OHM), dtype=float)
    cs = np.asarray(capacitors if capacitors else e6.values(*RECIPE_C_RANGE_F), dtype=float)
    rs = rs[(rs >= RECIPE_R_RANGE_OHM[0]) & (rs <= 2.2 * RECIPE_R_RANGE_OHM[1])]
    if rs.size == 0 or cs.size == 0:
        raise RequestError("the drawer has no resistor of 100 kΩ to 10 MΩ or no capacitor "
                           f"for the test oscillator; add some, or leave out {hint('stock')}")
    typ = get_family(family).thresholds(supply_v)
    th1, tl1 = closed_form_phases(float(typ.vt_plus_typ), float(typ.vt_minus_typ), 1.0,
                                  supply_v)
    rr, cc = np.meshgrid(rs, cs, indexing="ij")
    rc = rr * cc
    period = rc * (th1 + tl1)
    ok = (np.minimum(th1, tl1) * rc >= RECIPE_MIN_PHASE_S) & (period >= RECIPE_PERIOD_S[0]) \
        & (period <= RECIPE_PERIOD_S[1])
    if not ok.any():
        raise RequestError("no R and C in the drawer make a test oscillator of 4-10 s with "
                           "both phases over 1 s; add a resistor of 1-4.7 MΩ and a 1-2.2 µF "
                           f"film capacitor, or leave out {hint('stock')}")
    cost = np.where(ok, np.abs(np.log(period / RECIPE_AIM_S)) + 0.2 * (rr > 2.2e6)
                    + 0.2 * (cc > 2.2e-6), np.inf)
    i, j = np.unravel_index(int(np.argmin(cost)), cost.shape)
    r, c = float(rs[i]), float(cs[j])
    d = oscillator_design(family, r, c, supply_v, led)
    f = d.fast().row(0)
    return Recipe(design=d, r_ohm=r, c_f=c, period_s=f["period_s"], high_s=f["high_s"],
                  low_s=f["low_s"], from_stock=bool(resistors or capacitors))
