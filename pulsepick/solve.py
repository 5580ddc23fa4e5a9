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
the median build's. The candidate's figures are the median chip's, and the reference
engine checks them at the same levels; :func:`assess` adds a ``median_note`` when the
Monte Carlo median still moves off them (a supply range, lopsided parts).

The best circuit of each different topology (core and stage) is offered, so the
list is not five near-copies, and each is verified with the reference engine (see
:func:`assess`).
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from pulsepick.analysis.spread import DEFAULT_TEMP_RANGE_C
from pulsepick.circuits.base import (
    DARK,
    RUNS,
    STALLS,
    UNPOWERED,
    Topology,
    core_fits_chip,
    get_core,
    get_stage,
    stage_names,
)
from pulsepick.circuits.searchgrid import (
    STAGE_R_MIN_OHM,
    SearchContext,
)
from pulsepick.engine.environment import TIMER_KEY
from pulsepick.errors import RequestError
from pulsepick.request import ASSUMED_PEAK_A, SolveRequest

#: Width of one error unit: ln 1.1, a 10 % miss (about one E24 step, ref:iec-60063).
SIGMA = math.log(1.1)
#: An assumed (not stated) aim costs at most this much, and half of it at a miss of
#: about a factor 1.8 (width ln 2): it guides where nothing was asked but never pulls a
#: stated aim off (a circuit whose flash is tied to its period keeps the period asked).
#: Design choice.
ASSUMED_MAX_COST = 20.0
ASSUMED_WIDTH = math.log(2.0)
#: Cost per decade of energy per flash. Design choice (a solar build lives on it).
ENERGY_WEIGHT = 1.0
#: Reference energy per flash for the energy term, J (only shifts every score alike).
ENERGY_REF_J = 1e-6
#: Cost per part. Design choice: a tie-breaker.
PARTS_WEIGHT = 0.1
#: Extra cost of a circuit whose LED is dark or whose chip is unpowered: more than any
#: fit can cost (3 aims at BIG_LOG each), so a lit circuit always ranks first.
PENALTY_NOT_RUNNING = 1e6
#: Extra cost when the LED goes dark or the chip stops before the end of the night.
PENALTY_END = 20.0
#: Extra cost when the timing network stalls with the chip's guaranteed-maximum input
#: leakage over temperature (a hot summer night). Design choice.
PENALTY_HOT_LEAK = 3.0
#: Threshold step for the finite-difference threshold sensitivity, fraction of the supply.
THRESHOLD_STEP = 0.01
#: Largest log error counted (a factor e^20, about 5e8, off; a figure that cannot be
#: computed counts as this far off). Wide enough that a period far beyond reach still
#: ranks the longest reachable one first.
BIG_LOG = 20.0
#: Outdoor temperature range for the capacitor drift term, C (the spread's default range).
TEMP_RANGE_C = DEFAULT_TEMP_RANGE_C
#: Decades of hours of class-2 aging counted (10^4 h, about a year). Estimate.
AGING_DECADES = 4.0
#: Search sizes: slow-phase pairs kept, timing networks kept, coarse stage points
#: refined, picks kept per topology variant.
K_SLOW, K_TIMING, K_KEEP = 40, 32, 3
#: Per stage, the search sizes (coarse points refined, timing networks crossed with the
#: stage sets, coarse values per decade) are the stage module's ``search``; the stage
#: resistor bounds and first-estimate drop are in ``pulsepick.circuits.searchgrid``.
LN2 = math.log(2.0)
#: Flash and hold capacitors of at least this value are electrolytic, smaller ones X7R
#: ceramic (common practice for coupling and reservoir parts).
STAGE_ELECTROLYTIC_FROM_F = 1e-6

#: The current moving the timing capacitor at a threshold must be at least this many times
#: its typical leakage there (common practice). The same figure as
#: ``pulsepick.analysis.checks.LEAK_MARGIN``, kept here so the search does not import the
#: checks (and with them the reference engine) in its worker processes.
LEAK_MARGIN = 10.0
#: Blink rates: above about 10 flashes a second the eye no longer sees separate flashes,
#: and above a few tens of hertz (flicker fusion) it sees a steady light (common practice).
SEPARATE_FLASHES_MAX_HZ = 10.0
FLICKER_FUSION_HZ = 50.0

FIGURE_WORDS = {"period_s": "period", "flash_s": "flash length", "led_peak_a": "peak current",
                "effective_a": "effective current", "effective_mcd": "effective intensity"}


# ============================================================================ results

@dataclass(frozen=True)
class Candidate:
    """One offered circuit with its figures and, after :func:`assess`, its checks."""

    rank: int  # 1 = best
    design: Any  # pulsepick.design.Design
    parts: tuple  # PartLine tuple (pulsepick.partslist)
    figures: dict[str, float]  # fast engine at the design supply (Figures keys + status)
    errors: dict[str, float]  # aimed figure key -> figure/aim - 1 (fraction)
    score: float  # total cost, lower is better
    score_parts: dict[str, float]  # fit, spread, energy, parts, night
    period_spread: float  # estimated relative standard deviation of the period (fraction)
    end_figures: dict[str, float] | None = None  # fast engine at the end-of-night supply
    notes: tuple[str, ...] = ()
    reference: Any = None  # ReferenceResult, after assess()
    spread: Any = None  # SpreadResult, after assess() (when the analysis exists)
    drift: Any = None  # DriftResult, after assess() (supply range only)
    warnings: tuple[str, ...] = ()
    timings_s: dict[str, float] = field(default_factory=dict)  # s, per assessment step
    crossing_current: str | None = None  # the crossing-current assumption (Schmitt chips)
    median_note: str | None = None  # why the median build is off the nominal, after assess()
    aim_levels_v: tuple[float, float] | None = None  # V, (VT+, VT-) of the median chip aimed at
    misses: tuple[str, ...] = ()  # aimed figures missed by more than MISS_FACTOR (flagged)

    def _period_quantile(self, i: int) -> float | None:
        if self.spread is None or "period_s" not in self.spread.quantiles:
            return None
        return float(self.spread.quantiles["period_s"][i])

    @property
    def median_period_s(self) -> float | None:
        """s, the Monte Carlo median build's period (after assess())."""
        return self._period_quantile(1)

    @property
    def p5_period_s(self) -> float | None:
        """s, 5 % of the builds blink faster (after assess())."""
        return self._period_quantile(0)

    @property
    def p95_period_s(self) -> float | None:
        """s, 5 % of the builds blink slower (after assess())."""
        return self._period_quantile(2)

    @property
    def yield_fraction(self) -> float | None:
        """Share of the builds within the yield band of the asked period (after assess())."""
        return None if self.spread is None else float(self.spread.yield_fraction)

    @property
    def lasts_night(self) -> bool | None:
        """With a supply range: still running and lit at the end-of-night supply."""
        if self.end_figures is None:
            return None
        return int(self.end_figures["status"]) == RUNS

    @property
    def reference_figures(self) -> dict[str, float] | None:
        if self.reference is None:
            return None
        return self.reference.figures.row()


@dataclass(frozen=True)
class SolveResult:
    """What the solver offers for a request."""

    request: SolveRequest
    candidates: tuple[Candidate, ...]
    explanations: tuple[str, ...]  # why a target cannot be met, and what comes nearest
    nearest: dict[str, float] | None  # figures of the nearest circuit when none runs
    evaluated: int  # circuits evaluated with the fast engine
    search_s: float  # s, wall time of the search
    success: bool  # False: nothing at all can be offered
    message: str

    def with_candidates(self, candidates: tuple[Candidate, ...]) -> SolveResult:
        return replace(self, candidates=candidates)


# ============================================================================ search space

@dataclass
class _Space:
    """Value grids of one request (SI units)."""

    r_timing: np.ndarray  # ohm
    r_stage: np.ndarray  # ohm
    c_stage: np.ndarray  # F
    kinds: tuple[str, ...]  # timing capacitor kind keys
    c_timing: np.ndarray  # F
    c_kind: np.ndarray  # index into kinds
    r_tol: float  # fraction


def _coarser(a: str, b: str) -> str:
    from pulsepick.series import SERIES_NAMES

    return a if SERIES_NAMES.index(a) <= SERIES_NAMES.index(b) else b


def _space(req: SolveRequest) -> _Space:
    from pulsepick.parts.capacitor import get_cap_kind
    from pulsepick.series import get_series

    rser = get_series(req.r_series)
    stage_r_hi = req.r_max_ohm
    if req.stock is not None:
        stock_r = np.array(req.stock.resistors(), dtype=float)
        r_timing = stock_r[(stock_r >= req.r_min_ohm) & (stock_r <= req.r_max_ohm)]
        r_stage = stock_r[(stock_r >= STAGE_R_MIN_OHM) & (stock_r <= stage_r_hi)]
        pairs = req.stock.capacitors(req.timing_caps)
        kinds = tuple(dict.fromkeys(k for _, k in pairs))
        c_list, k_list = [], []
        for value, key in pairs:
            kind = get_cap_kind(key)
            if max(req.c_min_f, kind.c_min_f) <= value <= min(req.c_max_f, kind.c_max_f) \
                    * (1 + 1e-9):
                c_list.append(value)
                k_list.append(kinds.index(key))
        all_c = sorted({i.value for i in req.stock.items if i.kind == "C" and i.qty != 0})
        c_stage = np.array([c for c in all_c if req.c_min_f <= c <= req.c_max_f], dtype=float)
    else:
        r_timing = rser.values(req.r_min_ohm, req.r_max_ohm)
        r_stage = rser.values(STAGE_R_MIN_OHM, stage_r_hi)
        kinds = tuple(req.timing_caps)
        c_list, k_list = [], []
        for i, key in enumerate(kinds):
            kind = get_cap_kind(key)
            lo = max(req.c_min_f, kind.c_min_f)
            hi = min(req.c_max_f, kind.c_max_f)
            if lo > hi:
                continue
            vals = get_series(_coarser(req.c_series, kind.series_default)).values(lo, hi)
            c_list.extend(vals.tolist())
            k_list.extend([i] * vals.size)
        small = get_series(req.c_series).values(req.c_min_f, req.c_max_f)
        big = get_series(_coarser(req.c_series, "E6")).values(req.c_min_f, req.c_max_f)
        c_stage = np.unique(np.concatenate([small[small < STAGE_ELECTROLYTIC_FROM_F],
                                            big[big >= STAGE_ELECTROLYTIC_FROM_F]]))
    return _Space(
        r_timing=np.asarray(r_timing, dtype=float), r_stage=np.asarray(r_stage, dtype=float),
        c_stage=np.asarray(c_stage, dtype=float),
        kinds=kinds,
        c_timing=np.asarray(c_list, dtype=float), c_kind=np.asarray(k_list, dtype=int),
        r_tol=rser.tolerance_pct / 100.0,
    )


def stage_cap_kind(value_f: float) -> str:
    """Capacitor kind used for a flash or hold capacitor of ``value_f`` farads."""
    return "electrolytic" if value_f >= STAGE_ELECTROLYTIC_FROM_F * (1 - 1e-9) else "x7r"


def _cap_var(kind_key: str) -> float:
    """Variance (fraction²) of a timing capacitor's value from tolerance, drift and age.

    A class-2 ceramic's loss under DC bias is not here: the circuit is evaluated at the
    value left under its working bias, as :class:`pulsepick.design.Design` does.
    """
    from pulsepick.parts.capacitor import get_cap_kind

    kind = get_cap_kind(kind_key)
    tol = max(kind.tol_minus_pct, kind.tol_plus_pct) / 100.0
    temp = max(abs(float(kind.temperature_factor(t, "typ")) - 1.0) for t in TEMP_RANGE_C)
    age = kind.aging_pct_per_decade / 100.0 * AGING_DECADES if kind.class2 else 0.0
    return (tol**2 + temp**2 + age**2) / 3.0


# ============================================================================ scoring

def _log_err(x, target) -> np.ndarray:
    with np.errstate(all="ignore"):
        e = np.log(np.asarray(x, dtype=float) / target)
    return np.clip(np.where(np.isfinite(e), e, BIG_LOG), -BIG_LOG, BIG_LOG)


def _weights(aims: dict[str, tuple[float, bool]]) -> dict[str, bool]:
    """Which aims were stated (True) or assumed (False)."""
    return {k: stated for k, (_, stated) in aims.items()}


def _aim_cost(stated: bool, e) -> np.ndarray:
    """Cost of a log error ``e`` to an aim: quadratic if stated, saturating if assumed."""
    e = np.asarray(e, dtype=float)
    if stated:
        return e**2 / SIGMA**2
    return ASSUMED_MAX_COST * (1.0 - np.exp(-(e / ASSUMED_WIDTH) ** 2))


def _cost(fig, aims, weights, var, n_parts: int, v: float, leak_penalty=0.0,
          i_limit_a: float = math.inf) -> tuple[np.ndarray, dict]:
    """Vectorised score of evaluated circuits; returns (cost, parts of the cost).

    A circuit that stalls, or whose LED peak is above ``i_limit_a`` (A, the LED's
    rating), costs infinity: it is never offered.
    """
    fit = 0.0
    for key, (target, _) in aims.items():
        fit = fit + _aim_cost(weights[key], _log_err(getattr(fig, key), target))
    spread = np.asarray(var) / SIGMA**2
    with np.errstate(all="ignore"):
        energy_j = np.asarray(fig.supply_avg_a) * np.asarray(fig.period_s) * v
        energy = ENERGY_WEIGHT * np.log10(np.maximum(energy_j, 1e-18) / ENERGY_REF_J)
    status = np.asarray(fig.status)
    energy = np.where(np.isfinite(energy), energy, 0.0)
    penalty = np.where((status == DARK) | (status == UNPOWERED), PENALTY_NOT_RUNNING, 0.0)
    cost = fit + spread + energy + PARTS_WEIGHT * n_parts + penalty + leak_penalty
    with np.errstate(invalid="ignore"):
        over = np.asarray(fig.led_peak_a) > i_limit_a * (1.0 + 1e-9)
    cost = np.where((status == STALLS) | over, np.inf, cost)
    return cost, {"fit": fit, "spread": spread + leak_penalty, "energy": energy}


def _best_per_group(cost: np.ndarray, group: np.ndarray, k: int, total: int) -> np.ndarray:
    """Indices of the ``k`` cheapest per group, then the ``total`` cheapest of those."""
    ok = np.flatnonzero(np.isfinite(cost))
    if ok.size == 0:
        return ok
    order = ok[np.lexsort((cost[ok], group[ok]))]
    g = group[order]
    start = np.r_[True, g[1:] != g[:-1]]
    first = np.maximum.accumulate(np.where(start, np.arange(g.size), 0))
    keep = order[(np.arange(g.size) - first) < k]
    return keep[np.argsort(cost[keep], kind="stable")[:total]]


#: Cost per step of the timing capacitor's size/cost class (small 0, large 1, bulky or
#: rare 2; pulsepick.parts.capsize) by ``--prefer`` (design choice: "balanced" breaks
#: ties between otherwise equal circuits like one more part, "compact" outweighs a few
#: per cent of fit and a wider spread).
PREFER_WEIGHTS = {"figures": 0.0, "balanced": 0.1, "compact": 2.0}
#: A shown figure further than this factor from its aim is a miss (flagged, and shown
#: only when nothing closer exists; design choice).
MISS_FACTOR = 2.0
#: Figures held to MISS_FACTOR: the flash and the brightness aim.
MISS_KEYS = ("flash_s", "led_peak_a", "effective_a", "effective_mcd")
_MISS_WORDS = {"flash_s": "flash", "led_peak_a": "peak", "effective_a": "effective",
               "effective_mcd": "intensity"}


def misses(req: SolveRequest, figs: dict[str, float]) -> tuple[str, ...]:
    """The aimed flash/brightness figures of ``figs`` off their aim by more than
    ``MISS_FACTOR``, as short texts ("flash 2.24 s")."""
    out = []
    for key, (target, _) in req.aims().items():
        if key not in MISS_KEYS:
            continue
        got = float(figs.get(key, math.nan))
        if not (math.isfinite(got) and got > 0 and target > 0) or \
                abs(math.log(got / target)) > math.log(MISS_FACTOR):
            out.append(f"{_MISS_WORDS[key]} {figure_text(key, got)}")
    return tuple(out)


def led_current_limit(led, stage: str | None = None) -> tuple[float, str]:
    """The highest nominal LED peak the solver offers (A) and where it comes from.

    The LED's maximum continuous forward current (``i_max_a``). A pulse or fade stage
    gives short flashes: there a pulsed limit (``i_pulse_max_a``) replaces it when the
    LED model has one; without one the continuous rating is the limit. ``inf`` when
    the LED has no rating in our tables (a user-described LED).

    Returns ``(limit A, words naming it)``.
    """
    from pulsepick.units import format_eng

    cont = getattr(led, "i_max_a", None)
    pulsed = getattr(led, "i_pulse_max_a", None)
    short_flash = stage is not None and get_stage(stage).pulsed
    if short_flash and pulsed is not None and (cont is None or pulsed > cont):
        return float(pulsed), f"its pulsed rating of {format_eng(pulsed, 'A')}"
    if cont is None:
        return math.inf, "no rating (not in our tables)"
    if pulsed is None:
        return float(cont), (f"its continuous rating of {format_eng(cont, 'A')} (our tables "
                             "give no pulsed rating, so a short flash is held to it too)")
    return float(cont), f"its continuous rating of {format_eng(cont, 'A')}"


def n_parts(topo: Topology, values: dict[str, float]) -> int:
    """Parts count of a circuit: chip, resistors, capacitors, diodes, transistors, the LED."""
    core, stage = get_core(topo.core), get_stage(topo.stage)
    count = 2 + sum(1 for p in core.params + stage.params
                    if not (p.optional and values.get(p.name, 1.0) == 0))
    count += len(core.extra_parts(topo)) + len(stage.extra_parts(topo))
    return count


# ============================================================================ the search

@dataclass
class _Timing:
    """Kept timing networks of one core variant (arrays, one element each)."""

    values: dict[str, np.ndarray]
    kind: np.ndarray  # index into _Space.kinds
    g_typ: np.ndarray  # S, typical leakage conductance of C1
    var: np.ndarray  # fraction², expected squared spread of the period
    cost: np.ndarray
    penalty: np.ndarray  # cost added for stalling with the hot-end leakage
    t_high: np.ndarray  # s, charging phase with an unloaded output
    t_low: np.ndarray  # s, discharging phase with an unloaded output


@dataclass
class _Pick:
    cost: float
    topo: Topology
    family: str
    values: dict[str, float]
    kind: str  # timing capacitor kind key
    var: float
    parts_cost: dict[str, float]
    figures: dict[str, float]
    end_figures: dict[str, float] | None


class _Searcher:
    def __init__(self, req: SolveRequest, chip=None) -> None:
        self.req = req
        self.chip = chip
        self.space = _space(req)
        self.aims = req.aims()
        self.weights = _weights(self.aims)
        self.v = req.supply_v
        self.evaluated = 0
        self.seen: dict[str, list[float]] = {}
        t = req.targets
        flash = min(req.flash_s, 0.99 * t.period_s)
        self.short_target = min(flash, t.period_s - flash)
        self.long_target = t.period_s - self.short_target
        self.cap_var = np.array([_cap_var(k) for k in self.space.kinds])
        self.leak_margin = LEAK_MARGIN
        self.aim: tuple[str, str] | None = None  # (core, steer) whose median chip is aimed at

    # -- bookkeeping ------------------------------------------------------------------------
    def _note_range(self, key: str, x) -> None:
        x = np.asarray(x, dtype=float)
        x = x[np.isfinite(x) & (x > 0)]
        if x.size:
            lo, hi = float(x.min()), float(x.max())
            old = self.seen.get(key)
            self.seen[key] = [min(lo, old[0]), max(hi, old[1])] if old else [lo, hi]

    def _periods(self, topo, values, env):
        from pulsepick.engine import fast

        size = max(np.size(v) for v in values.values())
        self.evaluated += size
        return fast.periods(topo, values, env)

    def _evaluate(self, topo, values, env):
        from pulsepick.engine import fast

        size = max(np.size(v) for v in values.values())
        self.evaluated += size
        return fast.evaluate(topo, values, env, powered=True)

    # -- timing -----------------------------------------------------------------------------
    def _cap_leak(self, c: np.ndarray, kind: np.ndarray, which: str) -> np.ndarray:
        from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating

        g = np.zeros_like(c)
        for i, key in enumerate(self.space.kinds):
            sel = kind == i
            if np.any(sel):
                k = get_cap_kind(key)
                g[sel] = k.leak_conductance(c[sel], pick_voltage_rating(k, self.v), which=which)
        return g

    def _size_cost(self, c: np.ndarray, kind: np.ndarray) -> np.ndarray:
        """Cost of the timing capacitor's size/cost class, weighted by ``--prefer``."""
        from pulsepick.parts.capsize import size_rank

        weight = PREFER_WEIGHTS[self.req.prefer]
        out = np.zeros(np.shape(c))
        if weight == 0:
            return out
        for i, key in enumerate(self.space.kinds):
            sel = kind == i
            if np.any(sel):
                out[sel] = weight * size_rank(key, c[sel])
        return out

    def set_chip_envs(self, env, model) -> None:
        """The environments the timing sweep needs: typical, leaky, and shifted thresholds.

        The chip's threshold spread enters the period variance as split-normal spreads of
        VT+ and VT- (or the 555's threshold and trigger levels) between their datasheet
        minimum, typical and maximum at the design supply, propagated with finite
        differences; measured thresholds (the user's own chip) carry none.
        """
        v = self.v
        chip = self.chip
        if chip.is_timer:
            leak, hot = model.leak_a, model.leak_a
            plus = _threshold_var(model.thr_ratio_min * v, model.thr_ratio_typ * v,
                                   model.thr_ratio_max * v)
            minus = _threshold_var(model.trig_ratio_min * v, model.trig_ratio_typ * v,
                                    model.trig_ratio_max * v)
        else:
            leak, hot = model.leak_max_a, model.leak_max_hot_a
            th = model.thresholds(v)
            plus = _threshold_var(float(th.vt_plus_min), float(th.vt_plus_typ),
                                   float(th.vt_plus_max))
            minus = _threshold_var(float(th.vt_minus_min), float(th.vt_minus_typ),
                                    float(th.vt_minus_max))
        if chip.measured:
            plus = minus = 0.0
        step = THRESHOLD_STEP * v
        self.envs = {
            "typ": env,
            "leak": replace(env, pin_leak_a=leak),
            "hot": replace(env, pin_leak_a=hot),
            "plus": replace(env, vt_plus=env.vt_plus + step),
            "minus": replace(env, vt_minus=env.vt_minus + step),
        }
        self.chip_ranges = (plus, minus, step)

    def _working(self, values: dict, kind: np.ndarray, env) -> dict:
        """Values as the circuit sees them: a class-2 ceramic C1 under its DC bias.

        The bias is the middle of the switching levels, the part's rating the one picked
        for the full supply, as in :meth:`pulsepick.design.Design.working_values`.
        """
        from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating

        factor = np.ones(np.shape(values["c1"]))
        bias = 0.5 * (np.asarray(env.vt_plus, dtype=float) + np.asarray(env.vt_minus,
                                                                         dtype=float))
        bias = np.broadcast_to(bias, factor.shape)
        for i, key in enumerate(self.space.kinds):
            k = get_cap_kind(key)
            sel = kind == i
            if k.class2 and np.any(sel):
                rating = pick_voltage_rating(k, self.v)
                factor[sel] = k.dc_bias_factor(bias[sel], rating)
        if np.all(factor == 1.0):
            return values
        return {**values, "c1": values["c1"] * factor}

    def _end_currents(self, topo: Topology, values: dict, env
                      ) -> tuple[np.ndarray, np.ndarray]:
        """Currents (A) that move the timing capacitor as it reaches each threshold:
        charging at VT+ and discharging at VT-, through every path that conducts then,
        with an unloaded output (vectorised twin of
        :func:`pulsepick.analysis.checks.charging_currents`)."""
        first = {k: float(np.ravel(getattr(env, k))[0])
                 for k in ("vdd", "vt_plus", "vt_minus", "r_discharge")}
        return get_core(topo.core).end_currents(values, replace(env, **first), topo)

    def _leak_ok(self, topo: Topology, values: dict, g_typ: np.ndarray,
                 check: tuple[str, ...] = ("up", "down"), scale_up=1.0,
                 scale_down=1.0) -> np.ndarray:
        """True where the current moving the timing capacitor at each threshold is at
        least ``LEAK_MARGIN`` times the capacitor's typical leakage there (common
        practice: common practice).

        Charging at VT+ is the rule practice states (leakage works against it). The
        discharge at VT- is held to the same margin: leakage helps it, but a leakage
        known only to an order of magnitude and comparable to the discharge current
        sets the period instead of the parts (design choice). ``scale_up`` and
        ``scale_down`` shrink the currents where the LED stage loads the timing gate's
        output (see :func:`_end_scale`). The leakage is linear in voltage
        (``CapacitorKind.leakage_a``): the typical leakage conductance times the level.
        """
        env = self.envs["typ"]
        vtp = float(np.ravel(env.vt_plus)[0])
        vtm = float(np.ravel(env.vt_minus)[0])
        up, down = self._end_currents(topo, values, env)
        ok = np.ones(np.shape(g_typ), dtype=bool)
        with np.errstate(all="ignore"):
            if "up" in check:
                ok &= up * scale_up >= self.leak_margin * g_typ * vtp
            if "down" in check:
                ok &= down * scale_down >= self.leak_margin * g_typ * vtm
        return ok

    def _timing_eval(self, core_topo, values, kind, short_of):
        """Periods, cost, variance and penalty of timing networks (arrays).

        Variance (fraction², ln-period): resistor and capacitor tolerance and drift,
        the shift from guaranteed-maximum leakage at 25 C, and the chip's threshold
        spread. Penalty: the network stalls with the guaranteed-maximum leakage over
        temperature (the hot end of an outdoor range). A network whose charging
        current at VT+ is within ``LEAK_MARGIN`` of the capacitor's typical leakage is
        left out (cost infinity): it works on paper and stalls with a leakier part.
        """
        c = values["c1"]
        envs = self.envs
        g_typ = self._cap_leak(c, kind, "typ")
        g_max = self._cap_leak(c, kind, "max")
        leak_ok = self._leak_ok(core_topo, values, g_typ)
        values = self._working(values, kind, envs["typ"])
        th, tl, st = self._periods(core_topo, values, replace(envs["typ"], cap_leak_g=g_typ))
        period = th + tl
        running = (st == RUNS) & leak_ok
        self._note_range("timing_period_s", np.where(running, period, np.nan))
        self._note_range("timing_period_leaky_s", np.where((st == RUNS) & ~leak_ok, period,
                                                           np.nan))
        th2, tl2, st2 = self._periods(core_topo, values, replace(envs["leak"], cap_leak_g=g_max))
        _, _, st3 = self._periods(core_topo, values, replace(envs["hot"], cap_leak_g=g_max))
        with np.errstate(all="ignore"):
            shift = np.log((th2 + tl2) / period)
        shift = np.where((st2 == RUNS) & np.isfinite(shift), shift, 1.0)
        var = (2 * self.space.r_tol**2) / 3.0 + self.cap_var[kind] + shift**2 / 3.0
        plus, minus, step = self.chip_ranges
        for name, chip_var in (("plus", plus), ("minus", minus)):
            if chip_var <= 0:
                continue
            a, b, st4 = self._periods(core_topo, values, replace(self.envs[name],
                                                                 cap_leak_g=g_typ))
            with np.errstate(all="ignore"):
                slope = np.log((a + b) / period) / step
            slope = np.where((st4 == RUNS) & np.isfinite(slope), slope, 0.0)
            var = var + slope**2 * chip_var
        penalty = np.where(st3 == RUNS, 0.0, PENALTY_HOT_LEAK) + self._size_cost(c, kind)
        t = self.req.targets
        cost = (_log_err(period, t.period_s) ** 2 + var) / SIGMA**2
        cost = cost + penalty
        if short_of is not None:
            short = short_of(th, tl)
            cost = cost + _aim_cost(self.weights["flash_s"], _log_err(short, self.short_target))
        cost = np.where(running, cost, np.inf)
        return cost, var, g_typ, penalty, th, tl

    def timing(self, core: str, steer: str) -> _Timing | None:
        sp = self.space
        if sp.c_timing.size == 0 or sp.r_timing.size == 0:
            return None
        R, C = sp.r_timing, sp.c_timing
        nr, nc = R.size, C.size
        ri = np.tile(np.arange(nr), nc)
        ci = np.repeat(np.arange(nc), nr)
        core_model = get_core(core)
        search = core_model.timing_search
        plain = Topology(core_model.slow_phase_core, stage_names()[0])
        if search == "one-resistor":
            vals = {"r1": R[ri], "c1": C[ci]}
            cost, var, g, pen, th, tl = self._timing_eval(plain, vals, sp.c_kind[ci], None)
            keep = _best_per_group(cost, ci, 2, K_TIMING)
            return _Timing({k: v[keep] for k, v in vals.items()}, sp.c_kind[ci][keep], g[keep],
                           var[keep], cost[keep], pen[keep], th[keep], tl[keep])
        if search == "steered":
            # step 1: R1·C1 sets the slow phase (the plain core's phase)
            vals = {"r1": R[ri], "c1": C[ci]}
            c_kind = sp.c_kind[ci]
            g = self._cap_leak(vals["c1"], c_kind, "typ")
            th, tl, st = self._periods(plain, self._working(vals, c_kind, self.envs["typ"]),
                                       replace(self.envs["typ"], cap_leak_g=g))
            slow = tl if steer == "high" else th
            # R1 alone moves the slow phase: charging for a fast low phase, else discharging
            ok1 = (st == RUNS) & self._leak_ok(plain, vals, g,
                                               ("up",) if steer == "low" else ("down",))
            cost1 = np.where(ok1, _log_err(slow, self.long_target) ** 2
                             + sp.r_tol**2 + self.cap_var[c_kind], np.inf)
            keep1 = _best_per_group(cost1, ci, 3, K_SLOW)
            # step 2: R2 sets the fast phase
            k1, kr = keep1.size, nr
            base = np.repeat(keep1, kr)
            vals2 = {"r1": vals["r1"][base], "r2": np.tile(R, k1), "c1": vals["c1"][base]}
            topo = Topology(core, stage_names()[0], steer=steer)
            short_of = (lambda a, b: a) if steer == "high" else (lambda a, b: b)
            cost, var, g2, pen, th, tl = self._timing_eval(topo, vals2, c_kind[base], short_of)
            keep = _best_per_group(cost, ci[base], 2, K_TIMING)
            return _Timing({k: v[keep] for k, v in vals2.items()}, c_kind[base][keep],
                           g2[keep], var[keep], cost[keep], pen[keep], th[keep], tl[keep])
        # two resistors (RA, RB), step 1: RB·C1 sets the low phase (RA at its smallest)
        vals = {"ra": np.full(ri.size, R[0]), "rb": R[ri], "c1": C[ci]}
        c_kind = sp.c_kind[ci]
        g = self._cap_leak(vals["c1"], c_kind, "typ")
        topo = Topology(core, stage_names()[0])
        th, tl, st = self._periods(topo, self._working(vals, c_kind, self.envs["typ"]),
                                   replace(self.envs["typ"], cap_leak_g=g))
        ok1 = (st == RUNS) & self._leak_ok(topo, vals, g, ("down",))  # RB discharges
        cost1 = np.where(ok1, _log_err(tl, self.short_target) ** 2
                         + sp.r_tol**2 + self.cap_var[c_kind], np.inf)
        keep1 = _best_per_group(cost1, ci, 3, K_SLOW)
        base = np.repeat(keep1, nr)
        vals2 = {"ra": np.tile(R, keep1.size), "rb": vals["rb"][base], "c1": vals["c1"][base]}
        cost, var, g2, pen, th, tl = self._timing_eval(topo, vals2, c_kind[base],
                                                       lambda a, b: b)
        keep = _best_per_group(cost, ci[base], 2, K_TIMING)
        return _Timing({k: v[keep] for k, v in vals2.items()}, c_kind[base][keep], g2[keep],
                       var[keep], cost[keep], pen[keep], th[keep], tl[keep])

    # -- stage ------------------------------------------------------------------------------
    def _peak_aim(self) -> float:
        """The peak LED current the aims imply (A): stated, or from the effective aim."""
        return peak_needed(self.req)

    def _search_context(self, topo: Topology, env) -> SearchContext:
        """What the stage module needs to lay out its grid (see ``searchgrid``)."""
        led = self.req.led
        # centred at the LED's limit when the aim is above it (nothing above is offered)
        peak = min(self._peak_aim(), 0.95 * led_current_limit(led, topo.stage)[0])

        def first(x):
            return float(np.asarray(x, dtype=float).reshape(-1)[0])

        return SearchContext(
            led=led, supply_v=self.v, peak_a=peak, rout_high_ohm=first(env.rout_high),
            rout_low_ohm=first(env.rout_low), r_values=self.space.r_stage,
            c_values=self.space.c_stage, r_max_ohm=self.req.r_max_ohm,
            flash_s=min(self.req.flash_s, 0.5 * self.req.targets.period_s),
            period_s=self.req.targets.period_s)

    def _stage_grid(self, topo: Topology, env) -> dict[str, np.ndarray]:
        """Stage values around a first estimate from the aims (one pass, coarse for caps).

        The estimate is only a centre: resistors span a decade either side (and at
        least up to 100 ohm) and capacitors one and a half decades, so the
        evaluation, not the estimate, decides. The stage module lays the grid out.
        """
        self._ctx = self._search_context(topo, env)
        return get_stage(topo.stage).search_grid(self._ctx, topo)

    def _refine(self, stage: str, point: dict[str, float]) -> list[dict[str, float]]:
        """The point and its series neighbours (one step either side)."""
        return get_stage(stage).refine(self._ctx, point)

    def _rows_env(self, vdd: np.ndarray):
        from pulsepick.engine.environment import PartChoice, make_env

        env, powered = make_env(self.chip, PartChoice(led=self.req.led), vdd)
        if self.aim is None:
            return env, powered
        vtp, vtm = np.array(env.vt_plus, dtype=float), np.array(env.vt_minus, dtype=float)
        for v in np.unique(vdd):
            sel = vdd == v
            vtp[sel], vtm[sel] = aim_levels(self.req, self.chip, *self.aim, supply_v=float(v))
        return replace(env, vt_plus=vtp, vt_minus=vtm), powered

    def stage(self, topo: Topology, tim: _Timing, env) -> list[_Pick]:
        """Search one topology's stage values over the kept timing networks."""
        sname = topo.stage
        npart = n_parts(topo, {})
        grid = self._stage_grid(topo, env)
        size = next(iter(grid.values())).size
        if size == 0 or tim.cost.size == 0:
            return []
        # step 1: the stage grid at the best timing network
        i_limit = led_current_limit(self.req.led, sname)[0]
        _f, cost, _ = self._eval_cost(topo, tim, np.zeros(size, dtype=int), grid, env, npart,
                                      i_limit)
        search = get_stage(sname).search
        order = [i for i in np.argsort(cost, kind="stable")[:search.coarse_keep]
                 if np.isfinite(cost[i])]
        if not order:
            return []
        sets: dict[tuple, dict[str, float]] = {}
        for i in order:
            for point in self._refine(sname, {k: float(v[i]) for k, v in grid.items()}):
                sets.setdefault(tuple(point.items()), point)
        names = list(grid)
        stage_sets = {k: np.array([p[k] for p in sets.values()]) for k in names}
        # step 2: every kept timing network with every stage set, at the design supply
        # and (for a supply range) at the end of the night, in one evaluation
        n_t = min(tim.cost.size, search.timing_keep)
        n_s = stage_sets[names[0]].size
        t_idx = np.repeat(np.arange(n_t), n_s)
        s_vals = {k: np.tile(v, n_t) for k, v in stage_sets.items()}
        n = t_idx.size
        end_v = self.req.supply_end_v
        supplies = [self.v] if end_v is None else [self.v, end_v]
        vdd = np.repeat(np.array(supplies), n)
        env_rows, powered = self._rows_env(vdd)
        reps = len(supplies)
        vals = {k: np.tile(v[t_idx], reps) for k, v in tim.values.items()}
        vals.update({k: np.tile(v, reps) for k, v in s_vals.items()})
        vals = self._working(vals, np.tile(tim.kind[t_idx], reps), env_rows)
        self.evaluated += vdd.size
        from pulsepick.engine import fast

        f_all = fast.evaluate(topo, vals, replace(env_rows, cap_leak_g=np.tile(
            tim.g_typ[t_idx], reps)), powered=powered)
        f_nom = _slice_figures(f_all, slice(0, n))
        cost, parts = _cost(f_nom, self.aims, self.weights, tim.var[t_idx], npart, self.v,
                            tim.penalty[t_idx], i_limit)
        if get_core(topo.core).drives_stage_from_timing_output and not topo.buffered:
            # the stage loads the timing gate: the margin with the phases as loaded
            env_t = self.envs["typ"]
            scale_up = _end_scale(tim.t_high[t_idx], f_nom.high_s, *_phase_levels(env_t, True))
            scale_down = _end_scale(tim.t_low[t_idx], f_nom.low_s,
                                    *_phase_levels(env_t, False))
            ok = self._leak_ok(topo, {k: v[t_idx] for k, v in tim.values.items()},
                               tim.g_typ[t_idx], scale_up=scale_up, scale_down=scale_down)
            cost = np.where(ok, cost, np.inf)
        night = np.zeros(n)
        f_end = None
        if end_v is not None:
            f_end = _slice_figures(f_all, slice(n, 2 * n))
            with np.errstate(all="ignore"):
                drift = np.log(f_end.period_s / f_nom.period_s)
            ok = (f_end.status == RUNS) & np.isfinite(drift)
            night = np.where(ok, drift**2 / 3.0 / SIGMA**2,
                             PENALTY_END)
            cost = cost + night
        running = (f_nom.status == RUNS) & np.isfinite(cost)
        for key in ("period_s", "flash_s", "led_peak_a", "effective_a", "effective_mcd"):
            self._note_range(key, np.where(running, getattr(f_nom, key), np.nan))
        picks: list[_Pick] = []
        for i in np.argsort(cost, kind="stable"):
            if not np.isfinite(cost[i]) or len(picks) >= K_KEEP:
                break
            values = {k: float(v[t_idx[i]]) for k, v in tim.values.items()}
            values.update({k: float(v[i]) for k, v in s_vals.items()})
            if not self._stock_ok(topo, values):
                continue
            breakdown = {k: float(np.asarray(v).reshape(-1)[i]) for k, v in parts.items()}
            breakdown["night"] = float(night[i])
            kind_i = np.array([int(tim.kind[t_idx[i]])])
            size = float(self._size_cost(np.array([values["c1"]]), kind_i)[0])
            breakdown["size"] = size
            breakdown["spread"] -= size
            picks.append(_Pick(
                cost=float(cost[i]), topo=topo, family=self.chip.family, values=values,
                kind=self.space.kinds[int(tim.kind[t_idx[i]])], var=float(tim.var[t_idx[i]]),
                parts_cost=breakdown, figures=f_nom.row(int(i)),
                end_figures=None if f_end is None else f_end.row(int(i)),
            ))
        return picks

    def _eval_cost(self, topo, tim: _Timing, t_idx, stage_vals, env, npart,
                   i_limit: float = math.inf):
        vals = {k: v[t_idx] for k, v in tim.values.items()}
        vals.update(stage_vals)
        vals = self._working(vals, tim.kind[t_idx], env)
        f = self._evaluate(topo, vals, replace(env, cap_leak_g=tim.g_typ[t_idx]))
        cost, parts = _cost(f, self.aims, self.weights, tim.var[t_idx], npart, self.v,
                            tim.penalty[t_idx], i_limit)
        return f, cost, parts

    def _stock_ok(self, topo: Topology, values: dict[str, float]) -> bool:
        stock = self.req.stock
        if stock is None:
            return True
        from pulsepick.circuits.base import get_core, get_stage

        need: dict[tuple[str, float], int] = {}
        for p in get_core(topo.core).params + get_stage(topo.stage).params:
            v = values[p.name]
            if p.optional and v == 0:
                continue
            need[(p.kind, v)] = need.get((p.kind, v), 0) + 1
        for (kind, v), n in need.items():
            have = stock.count(kind, v)
            if have is not None and have < n:
                return False
        return True


def _phase_levels(env, charging: bool) -> tuple[float, float, float]:
    """(target level, start threshold, end threshold) of a timing phase, V."""
    vdd = float(np.ravel(env.vdd)[0])
    vtp = float(np.ravel(env.vt_plus)[0])
    vtm = float(np.ravel(env.vt_minus)[0])
    return (vdd, vtm, vtp) if charging else (0.0, vtp, vtm)


def _end_scale(t_bare, t_loaded, target: float, start: float, end: float) -> np.ndarray:
    """How much a load on the driving output shrinks the current at the end of a phase.

    An RC phase from ``start`` to ``end`` towards ``target`` lasts tau*L with
    L = ln((target - start)/(target - end)); the current at its end is proportional to
    (target - end) = (end - start)/(e^L - 1). A load that stretches the phase from
    ``t_bare`` to ``t_loaded`` moves the effective target so that the phase lasts
    tau*L*t_loaded/t_bare, and the end current scales by (e^L - 1)/(e^(L*t_loaded/
    t_bare) - 1) (an estimate: the steered and 555 branches are near-RC). 1 where the
    load shortens the phase.
    """
    with np.errstate(all="ignore"):
        big_l = math.log((target - start) / (target - end))
        stretch = np.asarray(t_loaded, dtype=float) / np.asarray(t_bare, dtype=float)
        scale = math.expm1(big_l) / np.expm1(np.minimum(big_l * stretch, 700.0))
    return np.where(np.isfinite(scale) & (stretch > 1.0), scale, 1.0)


def peak_needed(req: SolveRequest) -> float:
    """The peak LED current the request's brightness implies (A).

    A stated peak as it is; an effective current or intensity through the rectangular
    flash form Ie = Ip*t/(a + t), a = 0.2 s (Blondel-Rey, ref:ies-effective-intensity), with the flash
    aimed at; the assumed peak when no brightness is stated.
    """
    from pulsepick.circuits.base import EFFECTIVE_A_S

    aims, flash = req.aims(), req.flash_s
    if "led_peak_a" in aims:
        return aims["led_peak_a"][0]
    if "effective_a" in aims:
        eff = aims["effective_a"][0]
    else:
        eff = aims["effective_mcd"][0] / req.led.mcd_per_a
    return eff * (EFFECTIVE_A_S + flash) / flash


def _threshold_var(low: float, mode: float, high: float) -> float:
    """Variance (V²) of one threshold: the chip spread's split normal."""
    from pulsepick.analysis.chipspread import split_normal_var

    return split_normal_var(low, mode, high)


def _slice_figures(f, sl: slice):
    """The rows ``sl`` of a batch of figures (plain arrays)."""
    from pulsepick.circuits.base import Figures

    def cut(x):
        return np.asarray(x).reshape(-1)[sl] if np.ndim(x) else x

    return Figures(**{k: cut(getattr(f, k)) for k in Figures.KEYS}, status=cut(f.status))


def _stage_wanted(req: SolveRequest, stage: str) -> bool:
    """A stage that only earns its parts at high currents is searched when the aimed
    peak reaches its ``search_from_peak_a``, or when the request names it."""
    floor = get_stage(stage).search_from_peak_a
    return floor <= 0 or "stages" not in req.defaults or peak_needed(req) >= floor


def _variants(req: SolveRequest) -> list[tuple[str, str, list[Topology]]]:
    """Search tasks: (core, steer, topology variants), one timing sweep each.

    The costliest first (steered cores, then the plain Schmitt, then the 555), so
    worker processes finish together.
    """
    out = []
    for core in req.cores:
        steers = get_core(core).steers
        if not get_core(core).bufferable:
            bufs: tuple[bool, ...] = (False,)
        elif req.buffered is None:
            bufs = (False, True)
        else:
            bufs = (req.buffered,)
        for steer in steers:
            topos = []
            for stage in sorted(req.stages, key=lambda s: get_stage(s).search_rank):
                if not _stage_wanted(req, stage):
                    continue
                topos += [Topology(core, stage, buf, lit, steer) for buf in bufs
                          for lit in get_stage(stage).lits]
            out.append((core, steer, topos))
    out.sort(key=lambda t: get_core(t[0]).search_rank)
    return out


def _chip(req: SolveRequest, family: str):
    from pulsepick.engine.environment import ChipSpec

    if family == TIMER_KEY or not req.chip_overrides:
        return ChipSpec(family)
    return ChipSpec(family, **req.chip_overrides)


def _prechecks(req: SolveRequest) -> tuple[list[str], bool]:
    """Explanations known before searching; True when nothing can light at all."""
    from pulsepick.parts.led import LED_KEYS, get_led
    from pulsepick.units import format_eng

    notes: list[str] = []
    t = req.targets
    rate = 1.0 / t.period_s
    if rate >= FLICKER_FUSION_HZ:
        notes.append(
            f"A period of {time_text(t.period_s)} ({format_eng(rate, 'Hz')}) is faster than "
            f"the eye can follow: above a few tens of hertz (flicker fusion, common practice) "
            "the LED looks steadily lit at its average brightness, not blinking. Flashes read "
            f"as separate below about {SEPARATE_FLASHES_MAX_HZ:g} a second (a period above "
            f"{1 / SEPARATE_FLASHES_MAX_HZ:g} s).")
    elif rate > SEPARATE_FLASHES_MAX_HZ:
        notes.append(
            f"A period of {time_text(t.period_s)} ({format_eng(rate, 'Hz')}) is seen as a "
            f"flicker rather than separate flashes: those need fewer than about "
            f"{SEPARATE_FLASHES_MAX_HZ:g} a second (a period above "
            f"{1 / SEPARATE_FLASHES_MAX_HZ:g} s; common practice).")
    if req.flash_shortened:
        from pulsepick.request import ASSUMED_FLASH_S

        notes.append(
            f"No flash length was asked for, and the usual assumption of "
            f"{time_text(ASSUMED_FLASH_S)} does not fit in a period of {time_text(t.period_s)}: "
            f"a flash of {time_text(req.flash_s)} ({req.flash_s / t.period_s:.0%} of the "
            "period) is aimed at instead.")
    if t.flash_s is not None and t.flash_s >= t.period_s:
        notes.append(
            f"A flash of {time_text(t.flash_s)} cannot last longer than the period of "
            f"{time_text(t.period_s)}: the light would never go off. The circuits below "
            "keep the LED lit for as much of each period as they can; a steady light needs "
            "no oscillator at all.")
    led = req.led
    need_v = float(led.voltage(led.visible_a))
    best_i = float(led.current(req.supply_v))
    nothing = best_i < led.visible_a
    if nothing:
        lighter = [k for k in LED_KEYS
                   if float(get_led(k).voltage(get_led(k).visible_a)) < 0.9 * req.supply_v]
        notes.append(
            f"The {led.name} LED needs about {need_v:.2f} V to show (at "
            f"{format_eng(led.visible_a, 'A')}); at {req.supply_v:.2f} V it gets "
            + (f"at most {format_eng(best_i, 'A')}" if best_i >= 1e-9 else
               "practically no current (under 1 nA)")
            + " even with no resistor, so no circuit on this supply "
            "can light it. "
            + (f"LEDs that light here: {', '.join(lighter)}." if lighter else
               "None of the LEDs in our tables lights at this supply."))
    elif req.supply_end_v is not None and float(led.current(req.supply_end_v)) < led.visible_a:
        notes.append(
            f"The {led.name} LED needs about {need_v:.2f} V to show: it goes dark before the "
            f"supply falls to {req.supply_end_v:.2f} V at the end of the night.")
    return notes, nothing


#: Timing networks already swept in this process for the current request (a task per
#: stage shares its core's sweep).
_TIMING_CACHE: dict[Any, Any] = {}


def aim_levels(req: SolveRequest, chip, core: str, steer: str,
               supply_v: float | None = None) -> tuple[float, float]:
    """The switching levels (VT+, VT-) in V the search aims with: the median chip's.

    The phase weights are the aimed long and short phases for a steered core or a 555
    (the slow phase is the charging one for a fast low phase and for the 555), the
    typical chip's own ratio for the plain core (see :mod:`pulsepick.analysis.median`).
    """
    from pulsepick.analysis.median import median_levels

    t = req.targets
    short = min(min(req.flash_s, 0.99 * t.period_s), t.period_s - min(req.flash_s,
                                                                      0.99 * t.period_s))
    long = t.period_s - short
    v = req.supply_v if supply_v is None else supply_v
    search = get_core(core).timing_search
    if search == "one-resistor":  # one R sets both phases: the typical phase ratio
        return median_levels(chip, v, None, None, req.seed)
    if search == "steered" and steer == "high":  # a fast high phase: the low one is slow
        return median_levels(chip, v, short, long, req.seed)
    return median_levels(chip, v, long, short, req.seed)


def aim_env(req: SolveRequest, chip, core: str, steer: str, env):
    """``env`` with the median chip's levels (:func:`aim_levels`)."""
    vtp, vtm = aim_levels(req, chip, core, steer)
    return replace(env, vt_plus=np.asarray(vtp), vt_minus=np.asarray(vtm))


def _search_task(req: SolveRequest, family: str, core: str, steer: str,
                 topos: list[Topology]) -> tuple[list[_Pick], int, dict[str, list[float]]]:
    """One search task (a core variant and its stage topologies) for one chip family."""
    from pulsepick.engine.environment import PartChoice, chip_model, make_env

    chip = _chip(req, family)
    model = chip_model(chip)
    s = _Searcher(req, chip)
    env, _ = make_env(chip, PartChoice(led=req.led), req.supply_v)
    env = aim_env(req, chip, core, steer, env)
    s.aim = (core, steer)
    s.set_chip_envs(env, model)
    if _TIMING_CACHE.get("request") != req:
        _TIMING_CACHE.clear()
        _TIMING_CACHE["request"] = req
    key = (family, core, steer)
    if key in _TIMING_CACHE:  # swept already in this process: evaluations counted then
        tim, seen = _TIMING_CACHE[key]
        s.seen.update(seen)
    else:
        tim = s.timing(core, steer)
        _TIMING_CACHE[key] = (tim, dict(s.seen))
    picks: list[_Pick] = []
    if tim is not None and tim.cost.size:
        for topo in topos:
            picks.extend(s.stage(topo, tim, env))
    return picks, s.evaluated, s.seen


def solve(req: SolveRequest, *, jobs: int = 1) -> SolveResult:
    """Search every admissible circuit for ``req``; the best of each topology, ranked.

    ``jobs`` > 1 spreads the search over that many worker processes. Reference
    verification, spread, drift and warnings come from :func:`assess`.
    """
    from pulsepick.engine.environment import PartChoice, chip_model

    t_start = time.perf_counter()
    _TIMING_CACHE.clear()  # each search counts and times its own sweeps
    explanations, nothing = _prechecks(req)
    tasks = []
    unpowered = []
    for family in req.families:
        chip = _chip(req, family)
        model = chip_model(chip)
        if not bool(model.in_range(req.supply_v)):
            unpowered.append(f"{family} ({model.vdd_min_v:g}-{model.vdd_max_v:g} V)")
            continue
        for core, steer, topos in _variants(req):
            if core_fits_chip(core, chip.is_timer):
                tasks.append((req, family, core, steer, topos))
    if unpowered:
        explanations.append(
            f"At {req.supply_v:.2f} V these chips are outside their supply range and were "
            f"left out: {', '.join(unpowered)}.")
    if "family" not in req.defaults:
        from pulsepick.packing import family_plan

        note = family_plan(req).note  # the family given stops before the end of the night
        if note:
            explanations.append(f"Family {note}.")
    space = _space(req)
    where = f"in {req.stock.source}" if req.stock is not None else "in the allowed ranges"
    if space.c_timing.size == 0:
        kinds = ", ".join(req.timing_caps)
        explanations.append(f"No timing capacitor of the kinds allowed ({kinds}) is {where}; "
                            "allow other kinds with --timing-cap or widen --cap-range.")
    if space.r_timing.size == 0:
        explanations.append(f"No timing resistor is {where} (--min-r to --max-r).")
    picks: list[_Pick] = []
    evaluated = 0
    seen: dict[str, list[float]] = {}
    def meanwhile() -> None:
        # the design module brings the reference engine (scipy.integrate): import it
        # here while the worker processes search, not before they start
        import pulsepick.design  # noqa: F401

    for task_picks, n, task_seen in _run_tasks(_search_task, tasks, jobs, meanwhile):
        picks.extend(task_picks)
        evaluated += n
        for key, (lo, hi) in task_seen.items():
            old = seen.get(key)
            seen[key] = [min(lo, old[0]), max(hi, old[1])] if old else [lo, hi]
    picks.sort(key=lambda p: p.cost)
    # a circuit whose flash or brightness misses its aim by more than a factor of two is
    # shown only when nothing closer exists (and is then flagged)
    near = [p for p in picks if not misses(req, p.figures)]
    if near:
        picks = near

    # diversity: the best of each topology (core and stage) first, then the next best
    chosen: list[_Pick] = []
    groups: set[tuple] = set()
    for pick in picks:
        key = (pick.topo.core, pick.topo.stage)
        if key not in groups:
            groups.add(key)
            chosen.append(pick)
    chosen = chosen[:req.top]
    # then other variants (polarity, buffering, chip), then other timing networks; a
    # mere change of the LED resistor is a near-copy and never fills a place
    for ident in (_ident_variant, _ident_timing):
        taken = {ident(p) for p in chosen}
        for pick in picks:
            if len(chosen) >= req.top:
                break
            if ident(pick) not in taken:
                taken.add(ident(pick))
                chosen.append(pick)
    chosen.sort(key=lambda p: p.cost)

    from pulsepick.analysis.ratings import over_rating
    from pulsepick.design import Design

    def _over(pick: _Pick) -> bool:
        d = Design(pick.topo, pick.values, _chip(req, pick.family), PartChoice(led=req.led),
                   req.supply_v)
        return over_rating(d, float(pick.figures["led_peak_a"]))

    # a circuit with a current over a rating (the LED's, a gate pin's) never ranks first
    chosen.sort(key=_over)

    aims = req.aims()
    candidates = []
    for rank, pick in enumerate(chosen, start=1):
        design = Design(pick.topo, pick.values, _chip(req, pick.family),
                        PartChoice(led=req.led, timing_cap=pick.kind,
                                   stage_cap=_stage_kind(req, pick)), req.supply_v)
        figs = pick.figures
        errors = {key: (figs[key] / target - 1.0 if np.isfinite(figs[key]) else math.nan)
                  for key, (target, _) in aims.items()}
        candidates.append(Candidate(
            rank=rank, design=design, parts=_parts(req, design, figs), figures=figs,
            errors=errors, score=pick.cost,
            score_parts=dict(pick.parts_cost, parts=PARTS_WEIGHT * n_parts(pick.topo,
                                                                            pick.values)),
            period_spread=math.sqrt(pick.var), end_figures=pick.end_figures,
            notes=_candidate_notes(req, design, figs, pick.end_figures),
            aim_levels_v=aim_levels(req, design.chip, pick.topo.core, pick.topo.steer),
            misses=misses(req, figs),
        ))
    running = [c for c in candidates if c.figures["status"] == RUNS]
    nearest = None
    if not running and candidates:
        nearest = dict(candidates[0].figures)
    explanations += _explain(req, aims, seen, running)
    success = bool(running) and not nothing
    if not success and not explanations:
        explanations.append("No combination of the allowed parts oscillates with a visible "
                            "LED at this supply; widen the value ranges, allow more circuits "
                            "(--cores, --stages) or another LED or chip.")
    if not success:
        running = []
    else:
        running = [replace(c, rank=i) for i, c in enumerate(running, start=1)]
    message = (f"{len(running)} circuits offered" if success else
               "nothing can be offered for this request")
    return SolveResult(
        request=req, candidates=tuple(running), explanations=tuple(explanations),
        nearest=nearest, evaluated=evaluated, search_s=time.perf_counter() - t_start,
        success=success, message=message,
    )


def _run_tasks(fn, tasks: list[tuple], jobs: int, meanwhile=None) -> list:
    """``fn(*task)`` for every task, in worker processes when ``jobs`` > 1 (fork).

    ``meanwhile()``, when given, runs in this process while the workers work (or
    first, without workers).
    """
    if jobs <= 1 or len(tasks) <= 1:
        if meanwhile is not None:
            meanwhile()
        return [fn(*t) for t in tasks]
    from pulsepick.workers import run_pool

    return run_pool(fn, tasks, jobs, meanwhile)


def _ident_variant(pick: _Pick) -> tuple:
    """A topology variant on one chip family."""
    return (pick.family, pick.topo)


def _ident_timing(pick: _Pick) -> tuple:
    """A topology variant with its timing network's values."""
    from pulsepick.circuits.base import get_core

    names = [p.name for p in get_core(pick.topo.core).params]
    return (pick.family, pick.topo, tuple(pick.values[n] for n in names), pick.kind)


def _stage_kind(req: SolveRequest, pick: _Pick) -> str:
    for name in ("cp", "ch"):
        if name in pick.values:
            return _stock_kind(req, pick.values[name]) or stage_cap_kind(pick.values[name])
    return "electrolytic"


def _stock_kind(req: SolveRequest, value: float) -> str | None:
    """The dielectric the drawer gives for a capacitor value, if it names one."""
    if req.stock is None:
        return None
    for item in req.stock.items:
        if item.kind == "C" and item.dielectric and math.isclose(item.value, value,
                                                                 rel_tol=1e-9):
            return "film-pet" if item.dielectric == "film" else item.dielectric
    return None


def _parts(req: SolveRequest, design, figs: dict[str, float]) -> tuple:
    from pulsepick.partslist import DRAWER_RESISTOR_TOL_PCT, parts_list

    tol = DRAWER_RESISTOR_TOL_PCT if req.stock is not None else None
    return parts_list(design, r_series=req.r_series, c_series=req.c_series, r_tolerance_pct=tol,
                      led_peak_a=figs["led_peak_a"])


def _candidate_notes(req, design, figs, end) -> tuple[str, ...]:
    from pulsepick.units import format_eng

    notes = []
    if end is not None and end["status"] != RUNS:
        from pulsepick.design import status_word

        notes.append(f"at the end of the night ({req.supply_end_v:.2f} V) the circuit is "
                     f"{status_word(end['status'])}")
    if get_stage(design.topo.stage).steady_load and not design.topo.buffered \
            and get_core(design.topo.core).drives_stage_from_timing_output:
        notes.append("the LED hangs on the timing gate's output: its load is in the figures")
    if figs["status"] == DARK:
        notes.append(f"the LED gets {format_eng(figs['led_peak_a'], 'A')}: too little to be seen")
    return tuple(notes)


def time_text(seconds: float) -> str:
    """A time as a designer reads it: engineering notation below 100 s, then minutes,
    hours and days ("29 min", "12.4 h", "41.7 days")."""
    from pulsepick.units import format_eng

    if seconds is None or not math.isfinite(seconds):
        return "-"
    if abs(seconds) < 100.0:
        return format_eng(seconds, "s")
    if abs(seconds) < 2 * 3600.0:
        return f"{seconds / 60.0:.3g} min"
    if abs(seconds) < 72 * 3600.0:
        return f"{seconds / 3600.0:.3g} h"
    return f"{seconds / 86400.0:.3g} days"


def figure_text(key: str, value: float) -> str:
    """A figure in the unit a designer reads: times by :func:`time_text`, intensities
    in mcd (``effective_mcd`` is already in mcd), currents and charges in engineering
    notation."""
    from pulsepick.units import format_eng

    if value is None or not math.isfinite(value):
        return "-"
    if key.endswith("_mcd"):
        return f"{value:.3g} mcd"
    if key.endswith("_s"):
        return time_text(value)
    unit = {"_a": "A", "_c": "C"}.get(key[-2:], "")
    return format_eng(value, unit)


def _drive_limit_a(req: SolveRequest) -> float:
    """The most current a chip output can push through the LED with no series resistor
    at the design supply (A), over the families searched that run at this supply."""
    from pulsepick.engine.environment import PartChoice, chip_model, make_env

    best = 0.0
    for family in req.families:
        chip = _chip(req, family)
        if not bool(chip_model(chip).in_range(req.supply_v)):
            continue
        env, _ = make_env(chip, PartChoice(led=req.led), req.supply_v)
        for rout in (env.rout_high, env.rout_low):
            i = float(np.ravel(req.led.current(req.supply_v, r_ext=float(np.ravel(rout)[0])))[0])
            best = max(best, i)
    return best


def _current_explanation(req: SolveRequest, aims, running: list[Candidate]) -> str | None:
    """Why a stated brightness is out of reach: the peak it needs against the LED's
    rating and the chip output's drive, both named; None when it is within them."""
    from pulsepick.units import format_eng

    b = req.targets.brightness
    if b is None:
        return None
    need = peak_needed(req)
    limits = [led_current_limit(req.led, stage) for stage in req.stages]
    limit, limit_words = max(limits, key=lambda x: x[0])
    # a stage whose LED current does not pass through the gate lifts the drive limit
    through_gate = all(get_stage(s).gate_carries_led for s in req.stages
                       if _stage_wanted(req, s))
    drive = _drive_limit_a(req) if through_gate else math.inf
    cap = min(limit, drive)
    if not need > cap * math.exp(SIGMA):
        return None
    led, flash = req.led, req.flash_s
    blondel = "effective = peak x t/(0.2 s + t), Blondel-Rey"
    if b[0] == "peak_a":
        text = f"The peak current wanted is {format_eng(need, 'A')}"
        key = "led_peak_a"
    elif b[0] == "effective_a":
        text = (f"As bright as a steady {format_eng(b[1], 'A')} with a {time_text(flash)} "
                f"flash needs a peak LED current of about {format_eng(need, 'A')} ({blondel})")
        key = "effective_a"
    else:
        text = (f"An effective intensity of {b[1] * 1e3:.3g} mcd with a {time_text(flash)} "
                f"flash needs a peak of about {format_eng(need, 'A')} from the {led.name} LED "
                f"({led.mcd_per_a * 1e-3:.3g} mcd per mA; {blondel})")
        key = "effective_mcd"
    text += (f"; the LED is held to {limit_words}, and the chip outputs drive at most "
             f"{format_eng(drive, 'A')} into it at {req.supply_v:.2f} V with no series "
             "resistor")
    if drive < limit:
        text += (f" (it needs {float(led.voltage(need)):.2f} V for {format_eng(need, 'A')}): "
                 "the chip's drive at this supply is the limit; a higher supply, an LED of "
                 "lower forward voltage or a transistor driver would be needed.")
    else:
        text += (": the LED's rating is the limit; a brighter LED, several LEDs or a part "
                 "rated for more current would be needed.")
    if running:
        got = running[0].figures[key]
        target = aims[key][0]
        text += (f" The nearest circuit gives {figure_text(key, got)} "
                 f"({got / target - 1:+.0%}).")
    return text


def _explain(req: SolveRequest, aims, seen, running: list[Candidate]) -> list[str]:
    """Explain each stated aim that the best circuit misses by more than 10 %."""
    out = []
    if not running:
        return out
    current = _current_explanation(req, aims, running)
    if current is not None:
        out.append(current)
    best = running[0]
    for key, (target, stated) in aims.items():
        if not stated or (current is not None and key in ("led_peak_a", "effective_a",
                                                          "effective_mcd")):
            continue
        got = best.figures[key]
        if not (np.isfinite(got) and got > 0):
            continue
        if abs(math.log(got / target)) <= SIGMA:
            continue
        word = FIGURE_WORDS[key]
        span = seen.get(key)
        if key == "period_s":
            spans = [x for x in (seen.get("timing_period_s"), seen.get("period_s")) if x]
            span = [min(x[0] for x in spans), max(x[1] for x in spans)] if spans else None
        if key == "period_s" and span and target > span[1] * 1.1:
            out.append(_period_too_long(req, target, got, span[1],
                                        seen.get("timing_period_leaky_s")))
            continue
        text = (f"The {word} wanted is {figure_text(key, target)}; the nearest "
                f"circuit gives {figure_text(key, got)} ({got / target - 1:+.0%}).")
        if span:
            lo, hi = span
            if target > hi * 1.1:
                text += f" Nothing searched goes above {figure_text(key, hi)}"
                text += _why_high(req, key)
            elif target < lo / 1.1:
                text += f" Nothing searched goes below {figure_text(key, lo)}"
                text += _why_low(req, key)
        out.append(text)
    return out


def _period_too_long(req: SolveRequest, target: float, got: float, longest: float,
                     leaky: list[float] | None) -> str:
    """The period is beyond reach: by leakage, or by the value ranges allowed."""
    from pulsepick.units import format_eng

    ranges = (f"resistors up to {format_eng(req.r_max_ohm, 'Ω')} and capacitors up to "
              f"{format_eng(req.c_max_f, 'F')}")
    head = (f"The period wanted is {time_text(target)}; the nearest circuit gives "
            f"{time_text(got)} ({got / target - 1:+.0%}).")
    if leaky and leaky[1] > longest * 1.05:
        return (f"Period beyond what leakage allows: {head[0].lower()}{head[1:]} The "
                f"longest period found with the current charging the timing capacitor at "
                f"VT+ (and discharging it at VT-) at least {LEAK_MARGIN:g} times the "
                f"capacitor's typical leakage there is {time_text(longest)} (common "
                "practice: with less margin a leakier part slows or stalls it). Circuits "
                f"reaching up to {time_text(leaky[1])} with {ranges} were left out for that "
                "reason; a longer period needs a counter stage dividing a shorter one.")
    return (f"{head} Nothing searched goes above {time_text(longest)} with {ranges}: a "
            "larger --max-r or --cap-range, or a counter stage, would be needed.")


def _why_high(req: SolveRequest, key: str) -> str:
    from pulsepick.units import format_eng

    if key == "period_s":
        return (f": with resistors up to {format_eng(req.r_max_ohm, 'Ω')} and capacitors up "
                f"to {format_eng(req.c_max_f, 'F')} no longer period was found (a larger "
                "--max-r or --cap-range, or a counter stage, would be needed).")
    if key in ("led_peak_a", "effective_a", "effective_mcd"):
        return (f": the LED's own resistance and the chip's output resistance at "
                f"{req.supply_v:.2f} V limit the current (a brighter LED colour, a higher "
                "supply or a transistor driver would be needed).")
    if key == "flash_s":
        return ": the flash cannot outlast its lit phase."
    return "."


def _why_low(req: SolveRequest, key: str) -> str:
    if key == "period_s":
        return ": smaller resistors or capacitors than the allowed ranges would be needed."
    if key == "flash_s":
        return ": the steering and flash parts cannot make it shorter within the ranges."
    return "."


# ============================================================================ assessment

def _assess_one(design, target_period_s: float, builds: int, seed: int,
                supply_end_v: float | None, r_tols: dict[str, float],
                levels: tuple[float, float] | None = None) -> dict[str, Any]:
    """Reference run, spread, drift and warnings of one design (runs in a worker).

    ``levels`` (V): the reference run uses these switching levels (the median chip the
    search aimed at), so that it checks the figures the candidate shows.
    """
    from pulsepick.analysis.checks import assumptions, circuit_warnings
    from pulsepick.analysis.drift import drift
    from pulsepick.analysis.spread import spread
    from pulsepick.errors import PulsepickError

    out: dict[str, Any] = {"timings_s": {}, "warnings": []}
    t = time.perf_counter()
    kw = {} if levels is None else {"vt_plus": levels[0], "vt_minus": levels[1]}
    out["reference"] = design.reference(**kw)
    out["timings_s"]["reference"] = time.perf_counter() - t
    t = time.perf_counter()
    supply_range = None if supply_end_v is None else (supply_end_v, design.supply_v)
    try:
        out["spread"] = spread(design, target_period_s=target_period_s, builds=builds,
                               seed=seed, supply_range_v=supply_range,
                               resistor_tol_pct=r_tols or None)
    except PulsepickError as err:
        out["warnings"].append(f"spread analysis: {err}")
    out["timings_s"]["spread"] = time.perf_counter() - t
    if supply_end_v is not None:
        t = time.perf_counter()
        try:
            out["drift"] = drift(design, design.supply_v, supply_end_v)
        except PulsepickError as err:
            out["warnings"].append(f"drift analysis: {err}")
        out["timings_s"]["drift"] = time.perf_counter() - t
    try:
        out["warnings"].extend(circuit_warnings(design, levels=levels))
    except PulsepickError as err:
        out["warnings"].append(f"checks: {err}")
    if not design.chip.is_timer:
        out["crossing_current"] = assumptions(design).get("crossing_current")
    if out.get("spread") is not None:
        aimed = None
        if levels is not None:
            aimed = float(np.ravel(design.fast(**kw).period_s)[0])
        out["median_note"] = median_note(design, out["spread"], aimed)
    return out


#: The median build is worth a line when it is this far (fraction) off the nominal period.
MEDIAN_NOTE_SHIFT = 0.05
#: Thresholds whose typical value sits further than this share of their min..max range
#: from its middle are "off-centre".
OFF_CENTRE_SHARE = 0.1


def _thresholds_off_centre(design) -> bool:
    """Whether the chip's typical switching levels sit off the middle of their limits."""
    from pulsepick.engine.environment import chip_model

    if design.chip.measured:
        return False
    model = chip_model(design.chip)
    v = design.supply_v
    if design.chip.is_timer:
        triples = [(model.thr_ratio_min, model.thr_ratio_typ, model.thr_ratio_max),
                   (model.trig_ratio_min, model.trig_ratio_typ, model.trig_ratio_max)]
    else:
        th = model.thresholds(v)
        triples = [(th.vt_plus_min, th.vt_plus_typ, th.vt_plus_max),
                   (th.vt_minus_min, th.vt_minus_typ, th.vt_minus_max)]
    for lo, typ, hi in triples:
        lo, typ, hi = float(lo), float(typ), float(hi)
        if hi > lo and abs(typ - 0.5 * (lo + hi)) > OFF_CENTRE_SHARE * (hi - lo):
            return True
    return False


def median_note(design, spread, aimed_period_s: float | None = None) -> str | None:
    """A line when the Monte Carlo median period is off the nominal one, with the cause.

    The nominal figures use the chip's typical thresholds (or, with ``aimed_period_s``,
    the median chip the solver aimed at); the builds draw them with the typical value
    as the median, so where the typical value sits near one limit the median build
    moves away from the typical chip's. A supply range spread over the builds moves it
    too.
    """
    p50 = spread.quantiles.get("period_s", (math.nan,) * 3)[1]
    nominal = spread.nominal.get("period_s", math.nan)
    if aimed_period_s is not None:
        nominal = aimed_period_s
    if not (math.isfinite(p50) and math.isfinite(nominal) and nominal > 0):
        return None
    shift = p50 / nominal - 1.0
    if abs(shift) < MEDIAN_NOTE_SHIFT:
        return None
    text = (f"the median build blinks at {time_text(p50)} ({shift:+.0%} on the nominal "
            f"{time_text(nominal)})")
    causes = []
    shares = spread.shares
    if (aimed_period_s is None and _thresholds_off_centre(design)
            and shares.get("chip_thresholds", 0.0) > 0):
        causes.append("the chip's typical thresholds sit off-centre in its datasheet limits "
                      "(the builds draw them between the minimum and maximum); measure your "
                      "chip's thresholds and give --vt-plus and --vt-minus to centre on it")
    if spread.supply_range_v is not None and shares.get("supply", 0.0) > 0:
        lo, hi = spread.supply_range_v
        causes.append(f"the builds' supply is spread over {lo:g}..{hi:g} V while the "
                      f"nominal is at {design.supply_v:g} V")
    if not causes:
        causes.append("the spread of the parts is lopsided")
    return text + ": " + "; and ".join(causes)


def assess(result: SolveResult, *, jobs: int = 1) -> SolveResult:
    """Verify every candidate with the reference engine and add spread, drift, warnings.

    Parameters
    ----------
    result : SolveResult
        From :func:`solve`.
    jobs : int
        Worker processes (1: in this process). The reference engine takes tenths of
        a second per circuit, so two workers nearly halve the wall time on two cores.
    """
    req = result.request
    cands = list(result.candidates)
    if not cands:
        return result
    # the spread uses the resistor tolerances of the parts list (the series asked for)
    args = [_assess_args(req, c) for c in cands]
    outputs, _ = _assess_outputs(args, jobs)
    return result.with_candidates(tuple(_assessed(c, out) for c, out in zip(
        cands, outputs, strict=True)))


def _levels_kw(c) -> dict[str, float]:
    """Keyword arguments that evaluate a design at candidate ``c``'s aimed levels."""
    if c.aim_levels_v is None:
        return {}
    return {"vt_plus": c.aim_levels_v[0], "vt_minus": c.aim_levels_v[1]}


def _assess_args(req, c) -> tuple:
    """The arguments of :func:`_assess_one` for candidate ``c`` of request ``req``."""
    return (c.design, req.targets.period_s, req.builds, req.seed, req.supply_end_v,
            {p.param: p.tolerance_pct for p in c.parts if p.kind == "resistor"},
            c.aim_levels_v)


def _assess_outputs(args: list, jobs: int, during=None) -> tuple[list[dict[str, Any]], Any]:
    """:func:`_assess_one` of each argument tuple, on up to ``jobs`` worker processes
    (the longest reference runs first), and the result of ``during()`` (None when not
    given), which runs in this process while the workers work."""
    from pulsepick.limits import workers_for_builds

    outputs: list[dict[str, Any] | None] = [None] * len(args)
    meanwhile = None
    # bounded memory for many builds: fewer workers when each spread is large
    jobs = workers_for_builds(jobs, max((a[2] for a in args), default=0))
    if jobs > 1 and len(args) > 1:
        from pulsepick.workers import run_pool

        order = sorted(range(len(args)),
                       key=lambda i: get_stage(args[i][0].topo.stage).search_rank)
        got: list[Any] = []
        outputs = run_pool(_assess_one, args, jobs, order=order,
                           meanwhile=None if during is None else lambda: got.append(during()))
        meanwhile = got[0] if got else None
    else:
        outputs = [_assess_one(*a) for a in args]
        if during is not None:
            meanwhile = during()
    return [out for out in outputs if out is not None], meanwhile


def _assessed(c, out: dict[str, Any]):
    """Candidate ``c`` with the reference run, spread, drift and warnings of ``out``."""
    return replace(
        c, reference=out["reference"], spread=out.get("spread"), drift=out.get("drift"),
        warnings=tuple(out["warnings"]), timings_s=out["timings_s"],
        crossing_current=out.get("crossing_current"), median_note=out.get("median_note"),
    )


def default_jobs() -> int:
    """Worker processes for :func:`assess`: up to two, as the machine allows."""
    import os

    return max(1, min(2, os.cpu_count() or 1))


# ============================================================================ several lights

@dataclass(frozen=True)
class LightPick:
    """One light of a build: its own solve and the circuit chosen for the build."""

    name: str
    result: SolveResult  # the light's own solve, candidates as offered
    pick: Candidate | None  # the circuit used in the build (None: nothing offered)
    asked_s: float  # s, the period asked for this light
    moved: bool = False  # the spread-out search changed its timing values


@dataclass(frozen=True)
class BuildResult:
    """Several lights solved together (see :func:`solve_build`)."""

    request: Any  # BuildRequest (pulsepick.request)
    lights: tuple[LightPick, ...]
    plan: Any  # PackagePlan (pulsepick.analysis.multi), None when a light failed
    risks: tuple  # PairRisk per pair sharing a package, for the circuits as chosen
    risks_before: tuple | None  # the same before the spread-out search moved periods
    spread_out: Any  # SpreadOutChoice, or None
    total_supply_a: float  # A, all lights' average supply current at the design supply (a
    #   photoresistor light at the night's light level)
    success: bool
    message: str
    warnings: tuple[str, ...]
    search_s: float  # s, wall time
    lock_share: Any = None  # LockShare (pulsepick.analysis.lock) of the circuits as chosen
    lock_share_before: Any = None  # the same before the spread-out search moved periods
    remedies: tuple = ()  # Remedy, ranked by the lock share each leaves
    gating: Any = None  # BuildGating (pulsepick.analysis.gating); None without a detector
    rates: Any = None  # {light index: LightRate (pulsepick.packing)} for photoresistor lights
    night_designs: tuple = ()  # per light, the circuit as it runs at night (a photoresistor
    #   light at the night's light level, pulsepick.packing.night_designs); () when failed

    @property
    def picks(self) -> tuple[Candidate, ...]:
        return tuple(li.pick for li in self.lights if li.pick is not None)


def _use(name: str, cand: Candidate):
    from pulsepick.analysis.multi import LightUse

    d = cand.design
    return LightUse(name, d.chip.family, bool(d.topo.buffered and not d.chip.is_timer))


def _least_uses(breq) -> list:
    """The fewest gates each light could take (for the package check before solving)."""
    from pulsepick.analysis.multi import LightUse

    out = []
    for li in breq.lights:
        req = li.request
        schmitt = [f for f in req.families if f != TIMER_KEY]
        cores = [c for c in req.cores if get_core(c).chip_kind != "timer"]
        if schmitt and cores:
            out.append(LightUse(li.name, schmitt[0], bool(req.buffered)))
        else:
            out.append(LightUse(li.name, TIMER_KEY, False))
    return out


def _plan(breq, names, cands):
    from pulsepick.analysis.gating import detector_gates
    from pulsepick.analysis.multi import plan_packages

    return plan_packages([_use(n, c) for n, c in zip(names, cands, strict=True)],
                         dusk_detector=breq.dusk_detector,
                         periods_s=[c.figures["period_s"] for c in cands],
                         dusk_gates=detector_gates([c.design.topo for c in cands]))


def _fit_packages(breq, names, results, chosen: list[int]) -> list[int]:
    """Swap lights to other offered circuits (fewer gates, a shared family) so the build
    takes as few packages as the offered circuits allow; raises with the count when it
    cannot fit ``max_packages``. Among choices with the fewest packages the one reached
    with the fewest swaps (the best scores) is kept."""
    from pulsepick.analysis.multi import package_limit_error

    limit = breq.max_packages

    def state(choice):
        plan = _plan(breq, names, [results[i].candidates[k] for i, k in enumerate(choice)])
        return (len(plan.packages), plan.gates_needed), plan

    cur, plan = state(chosen)
    history = [(cur[0], list(chosen))]
    while cur[0] > 1:
        best = None
        for i, res in enumerate(results):
            for k in range(len(res.candidates)):
                if k == chosen[i]:
                    continue
                trial = chosen.copy()
                trial[i] = k
                st, _ = state(trial)
                if st < cur:
                    cost = res.candidates[k].score - res.candidates[chosen[i]].score
                    key = (st, cost)
                    if best is None or key < best[0]:
                        best = (key, trial)
        if best is None:
            break
        chosen = best[1]
        cur, plan = state(chosen)
        history.append((cur[0], list(chosen)))
    if limit is not None and cur[0] > limit:
        raise RequestError(package_limit_error(plan, limit))
    fewest = min(n for n, _ in history)
    return next(c for n, c in history if n == fewest)


def _one_family(breq, names, results, chosen: list[int]) -> list[int]:
    """Lights on one package need one logic family: move the others to the commonest."""
    fams = [results[i].candidates[k].design.chip.family for i, k in enumerate(chosen)]
    schmitt = [f for f in fams if f != TIMER_KEY]
    if len(set(schmitt)) <= 1:
        return chosen
    order = list(breq.lights[0].request.families)
    target = max(set(schmitt), key=lambda f: (schmitt.count(f), -order.index(f)
                                               if f in order else 0))
    for i in range(len(chosen)):
        if fams[i] in (target, TIMER_KEY):
            continue
        alts = [j for j, c in enumerate(results[i].candidates)
                if c.design.chip.family in (target, TIMER_KEY)]
        if alts:
            chosen[i] = alts[0]
    return chosen


def solve_build(breq, *, jobs: int = 1, assess_picks: bool = True) -> BuildResult:
    """Solve every light of ``breq`` and fit them on shared packages.

    Each light is solved as on its own (:func:`solve`); its best circuit is taken unless
    the build needs another to keep one logic family per package or to fit
    ``max_packages`` (then the offered circuit that frees gates at the least score is
    used). Pairs sharing a package are checked for lock risk, and with
    ``breq.spread_out`` their periods are moved within the tolerance to keep clear
    (:mod:`pulsepick.analysis.multi`). The chosen circuits are verified with
    :func:`assess` when ``assess_picks``.

    Raises
    ------
    RequestError
        when the lights cannot fit ``max_packages`` even with the fewest gates; the
        message gives the count.
    """
    from pulsepick.analysis import multi
    from pulsepick.request import BuildRequest

    assert isinstance(breq, BuildRequest)
    t0 = time.perf_counter()
    names = [li.name for li in breq.lights]
    if breq.max_packages is not None:
        least = multi.plan_packages(_least_uses(breq), dusk_detector=breq.dusk_detector)
        text = multi.package_limit_error(least, breq.max_packages)
        if text is not None:
            raise RequestError(text)
    from pulsepick.packing import solve_lights

    results, pack_notes = solve_lights(breq, solve, jobs=jobs)
    failed = [n for n, r in zip(names, results, strict=True) if not r.success]
    if failed:
        lights = tuple(LightPick(n, r, r.candidates[0] if r.candidates else None,
                                 li.request.targets.period_s)
                       for n, r, li in zip(names, results, breq.lights, strict=True))
        return BuildResult(
            request=breq, lights=lights, plan=None, risks=(), risks_before=None,
            spread_out=None, total_supply_a=math.nan, success=False,
            message=f"nothing can be offered for {', '.join(failed)}",
            warnings=tuple(f"{n}: {e}" for n, r in zip(names, results, strict=True)
                           for e in r.explanations),
            search_s=time.perf_counter() - t0)
    chosen = _one_family(breq, names, results, [0] * len(results))
    chosen = _fit_packages(breq, names, results, chosen)
    picks = [results[i].candidates[k] for i, k in enumerate(chosen)]
    plan = _plan(breq, names, picks)
    groups = [plan.package_of(i) for i in range(len(picks))]
    asked = [li.request.targets.period_s for li in breq.lights]
    margin = breq.lock_margin

    def bands(cands):
        return [multi.ratio_samples(c.design, seed=breq.lights[i].request.seed + i,
                                    resistor_tol_pct=_r_tols(c))
                for i, c in enumerate(cands)]

    samples = bands(picks)
    periods = [c.figures["period_s"] for c in picks]
    risks = multi.lock_risks(periods, groups, samples, margin=margin)
    risks_before = None
    choice = None
    moved = [False] * len(picks)
    from pulsepick import packing
    from pulsepick.analysis.lock import ACCEPTABLE_LOCK_SHARE, minimise_share

    lock_seed = breq.lights[0].request.seed
    # a photoresistor light runs at night at its network's value in the night's light
    rates = packing.light_rates(breq, picks) if breq.photoresistors else {}
    night = packing.night_designs(breq, picks, rates)
    share = packing.build_lock_share(breq, picks, groups, seed=lock_seed, designs=night)
    share_before = None
    if breq.spread_out:
        options = [_period_options(breq.lights[i].request, c, asked[i], breq.period_tolerance)
                   for i, c in enumerate(picks)]
        pairs = [(i, j) for i, j in itertools.combinations(range(len(picks)), 2)
                 if groups[i] == groups[j]]
        offsets = {}
        for i, j in pairs:
            lo, hi = multi.pair_band(samples[i], samples[j])
            x = math.log(periods[i] / periods[j])
            offsets[(i, j)] = (lo - x, hi - x) if math.isfinite(lo) else (0.0, 0.0)
        choice = multi.choose_periods(asked, [o.periods_s for o in options], pairs, offsets,
                                      margin=margin, tolerance=breq.period_tolerance)
        # the least share of builds near a lock, from the clearest choice among others
        k = packing.night_scales(picks, night)
        best, _ = minimise_share([a * k[i] for i, a in enumerate(asked)],
                                 [o.periods_s * k[i] for i, o in enumerate(options)], share,
                                 [p * k[i] for i, p in enumerate(periods)], groups,
                                 starts=[list(choice.chosen)])
        choice = replace(choice, chosen=tuple(best), chosen_s=tuple(
            float(options[i].periods_s[k]) for i, k in enumerate(best)))
        risks_before = risks
        share_before = share
        new = []
        for i, c in enumerate(picks):
            values = options[i].values[choice.chosen[i]]
            if choice.chosen[i] == options[i].original:
                new.append(c)
                continue
            moved[i] = True
            new.append(_revalue(breq.lights[i].request, c, values))
        picks = new
        samples = bands(picks)
        periods = [c.figures["period_s"] for c in picks]
        risks = multi.lock_risks(periods, groups, samples, margin=margin)
        rates = packing.light_rates(breq, picks) if breq.photoresistors else {}
        night = packing.night_designs(breq, picks, rates)
        share = packing.build_lock_share(breq, picks, groups, seed=lock_seed, designs=night)
        limit = (ACCEPTABLE_LOCK_SHARE if breq.max_lock_share is None
                 else breq.max_lock_share)
        choice = replace(choice, success=share.share <= limit, message=(
            f"the share of builds with a pair near a lock goes from {share_before.share:.1%} "
            f"to {share.share:.1%} (least within {breq.period_tolerance:.0%} of the periods "
            "asked)"))
    chosen_picks = list(picks)

    def remedies_fn():
        return packing.lock_remedies(
            breq, chosen_picks, groups, share,
            lambda i, tol: _period_options(breq.lights[i].request, chosen_picks[i], asked[i],
                                           tol),
            seed=lock_seed, designs=night)

    if assess_picks:
        # every light's runs shared among the workers at once, the remedies meanwhile
        outs, remedies = _assess_outputs([_assess_args(r.request, c) for r, c in zip(
            results, picks, strict=True)], jobs, during=remedies_fn)
        picks = [_assessed(c, out) for c, out in zip(picks, outs, strict=True)]
    else:
        remedies = remedies_fn()
    warnings = list(pack_notes)
    near = [p for p in share.pairs if p.share > 0]
    if near:
        warnings.append(packing.share_text(names, max(near, key=lambda p: p.share), margin,
                                           breq.spread_out, share.share, len(near)))
    if any(p.share > 0 for p in share.pairs) and packing.remedies_text(remedies,
                                                                       breq.spread_out):
        warnings.append(packing.remedies_text(remedies, breq.spread_out))
    gating = None
    if breq.dusk_detector:
        from pulsepick.analysis.gating import build_gating

        gating = build_gating(packing.held_designs(picks, rates), *packing.supply_span(
            breq.lights[0].request))
        for h in gating.holds:
            if not h.holds:
                warnings.append(
                    f"{names[h.light]}: the dusk hold leaves its timing node at "
                    f"{h.node_v:.2f} V at the end of the night's supply, not beyond the "
                    f"threshold limit of {h.limit_v:.2f} V; it may keep blinking by day")
    for i, lr in rates.items():
        warnings.extend(f"{names[i]}: {w}" for w in getattr(lr.rate, "warnings", ()))
    # the night's draw: a photoresistor light at the night's light level
    # every light at the switching levels its figures use (the median chip aimed at)
    total = float(sum(c.figures["supply_avg_a"] if d is c.design else
                      np.ravel(d.fast(**_levels_kw(c)).supply_avg_a)[0]
                      for c, d in zip(picks, night, strict=True)))
    ok, message = packing.build_verdict(breq, len(picks), len(plan.packages), share,
                                        spread=choice is not None)
    lights = tuple(LightPick(n, r, c, asked[i], moved[i])
                   for i, (n, r, c) in enumerate(zip(names, results, picks, strict=True)))
    return BuildResult(request=breq, lights=lights, plan=plan, risks=risks,
                       risks_before=risks_before, spread_out=choice, total_supply_a=total,
                       success=ok, message=message, warnings=tuple(warnings),
                       search_s=time.perf_counter() - t0, lock_share=share,
                       lock_share_before=share_before, remedies=remedies, gating=gating,
                       rates=rates, night_designs=tuple(night))


def _period_options(req: SolveRequest, c: Candidate, asked_s: float, tolerance: float):
    """Standard-value variants of a pick, from the drawer when the request has one."""
    from pulsepick.analysis.multi import period_options

    r_values = c_values = None
    if req.stock is not None:
        r_values = req.stock.resistors()
        c_values = [v for v, k in req.stock.capacitors((c.design.parts.timing_cap,))]
    return period_options(c.design, asked_s, tolerance, r_series=req.r_series,
                          c_series=req.c_series, r_values=r_values, c_values=c_values,
                          levels=c.aim_levels_v)


def _r_tols(c: Candidate) -> dict[str, float] | None:
    tols = {p.param: p.tolerance_pct for p in c.parts if p.kind == "resistor"}
    return tols or None


def _revalue(req: SolveRequest, c: Candidate, values: dict[str, float]) -> Candidate:
    """The candidate with new timing values: figures, errors and parts follow."""
    design = replace(c.design, values=dict(values))
    kw = {} if c.aim_levels_v is None else {"vt_plus": c.aim_levels_v[0],
                                            "vt_minus": c.aim_levels_v[1]}
    figs = design.fast(**kw).row(0)
    errors = {key: (figs[key] / target - 1.0 if np.isfinite(figs[key]) else math.nan)
              for key, (target, _) in req.aims().items()}
    return replace(c, design=design, figures=figs, errors=errors,
                   parts=_parts(req, design, figs), reference=None, spread=None, drift=None,
                   warnings=(), crossing_current=None, median_note=None,
                   notes=(*c.notes, "timing values moved by the spread-out search"))


__all__ = [
    "ASSUMED_PEAK_A", "BuildResult", "Candidate", "LightPick", "SolveResult", "assess",
    "default_jobs", "n_parts", "solve", "solve_build", "stage_cap_kind",
]
