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
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from fractions import Fraction
from typing import Any

import numpy as np

from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import RequestError
from pulsepick.parts.logic import GATES_PER_PACKAGE

#: Margin around a simple ratio within which a pair is at lock risk, fraction. Estimate:
#: "within a few percent" (common practice).
DEFAULT_LOCK_MARGIN = 0.03
#: Largest denominator of a simple ratio p/q (shorter over longer period).
MAX_RATIO_Q = 4
#: Period tolerance of the spread-out search, fraction of the period asked (design choice).
DEFAULT_PERIOD_TOLERANCE = 0.10
#: Variants of a light keep its flash and LED peak within this factor (design choice).
VARIANT_FIGURE_FACTOR = 1.15
#: Timing values are stepped within this factor of the solved ones (design choice).
VARIANT_VALUE_FACTOR = 1.6
#: Monte Carlo builds per light for the ratio bands.
BAND_BUILDS = 2000
#: Clearance (log units) beyond which the search prefers staying near the periods asked.
CLEARANCE_CUSHION = 0.01
GOLDEN = (1.0 + math.sqrt(5.0)) / 2.0


# ============================================================================ gates

@dataclass(frozen=True)
class LightUse:
    """What one light takes from the chips."""

    name: str
    family: str  # logic family key, or "timer555"
    buffered: bool  # a spare gate drives its LED stage

    @property
    def is_timer(self) -> bool:
        return self.family == "timer555"

    @property
    def gates(self) -> int:
        return 0 if self.is_timer else 1 + int(self.buffered)


@dataclass(frozen=True)
class Package:
    """One chip package of the build."""

    number: int  # 1-based, U1, U2, ...
    family: str  # logic family key or "timer555"
    gates_used: int  # gates taken (a 555 counts 1)
    lights: tuple[int, ...]  # indices of the lights on it
    dusk: bool  # holds the dusk detector's sense gate

    @property
    def is_timer(self) -> bool:
        return self.family == "timer555"


@dataclass(frozen=True)
class PackagePlan:
    """The packages a build needs, with the count that decides it."""

    packages: tuple[Package, ...]
    n_lights: int
    oscillators: int  # Schmitt oscillator gates
    buffers: int  # buffer gates
    dusk: int  # gates of the dusk detector (its sense gate and any hold inverter), else 0
    timers: int  # 555 packages

    @property
    def gates_needed(self) -> int:
        """Schmitt gates, the dusk detector's included."""
        return self.oscillators + self.buffers + self.dusk

    @property
    def hex_packages(self) -> int:
        return sum(1 for p in self.packages if not p.is_timer)

    def package_of(self, light: int) -> int:
        """The package number holding light ``light`` (index)."""
        for p in self.packages:
            if light in p.lights:
                return p.number
        raise KeyError(light)

    def describe(self) -> str:
        """The count in words, e.g. ``4 lights need 8 gates (4 oscillators, 4 buffers)
        plus 1 for the dusk detector``."""
        words = []
        schmitt = self.n_lights - self.timers
        if schmitt:
            words.append(f"{_n(schmitt, 'light')} need{'s' if schmitt == 1 else ''} "
                         f"{_n(self.oscillators + self.buffers, 'gate')} "
                         f"({_n(self.oscillators, 'oscillator')}, "
                         f"{_n(self.buffers, 'buffer')})")
        if self.timers:
            words.append(f"{_n(self.timers, 'light')} on 555 timers take "
                         f"{_n(self.timers, 'package')}")
        text = "; ".join(words)
        if self.dusk:
            gates = _n(self.dusk, "gate") if not schmitt or self.timers else str(self.dusk)
            text += f" plus {gates} for the dusk detector"
        return text


def _n(k: int, word: str) -> str:
    return f"{k} {word}{'' if k == 1 else 's'}"


def plan_packages(uses: Sequence[LightUse], *, dusk_detector: bool = True,
                  dusk_family: str | None = None,
                  periods_s: Sequence[float] | None = None,
                  dusk_gates: int = 1) -> PackagePlan:
    """Place the lights on packages per logic family, as few packages as the gates need.

    The dusk detector's gate goes with ``dusk_family`` (default: the first Schmitt
    light's family, or ``hc`` when every light is on a 555). With ``periods_s`` (s), each
    light goes to the package with room where its period keeps furthest from a simple
    ratio with the lights already there (nominal ratios widened by ``PLAN_BAND``);
    without, first fit, largest first. ``dusk_gates``: the detector's sense gate plus its
    hold inverter when one is needed (``pulsepick.analysis.gating``).
    """
    if not uses:
        raise RequestError("a build needs at least one light")
    schmitt_families = [u.family for u in uses if not u.is_timer]
    dfam = dusk_family or (schmitt_families[0] if schmitt_families else "hc")
    packages: list[dict[str, Any]] = []
    for family in dict.fromkeys([*schmitt_families, *([dfam] if dusk_detector else [])]):
        items = [(u.gates, i) for i, u in enumerate(uses) if u.family == family]
        items.sort(key=lambda t: -t[0])
        mine: list[dict[str, Any]] = []
        if dusk_detector and family == dfam:
            items.insert(0, (dusk_gates, -1))
        if periods_s is not None:
            total = sum(size for size, _ in items)
            mine = [{"family": family, "used": 0, "lights": [], "dusk": False}
                    for _ in range(max(1, math.ceil(total / GATES_PER_PACKAGE)))]
        for size, idx in items:
            room = [p for p in mine if p["used"] + size <= GATES_PER_PACKAGE]
            if periods_s is not None and idx >= 0 and room:
                room.sort(key=lambda p: (-_plan_clearance(periods_s, idx, p["lights"]),
                                         p["used"]))
            home = room[0] if room else None
            if home is None:
                home = {"family": family, "used": 0, "lights": [], "dusk": False}
                mine.append(home)
            home["used"] += size
            if idx < 0:
                home["dusk"] = True
            else:
                home["lights"].append(idx)
        packages.extend(mine)
    for i, u in enumerate(uses):
        if u.is_timer:
            packages.append({"family": "timer555", "used": 1, "lights": [i], "dusk": False})
    packages = [p for p in packages if p["used"] > 0]
    out = tuple(Package(number=k, family=p["family"], gates_used=p["used"],
                        lights=tuple(sorted(p["lights"])), dusk=p["dusk"])
                for k, p in enumerate(packages, start=1))
    return PackagePlan(
        packages=out, n_lights=len(uses),
        oscillators=sum(1 for u in uses if not u.is_timer),
        buffers=sum(1 for u in uses if not u.is_timer and u.buffered),
        dusk=dusk_gates if dusk_detector else 0, timers=sum(1 for u in uses if u.is_timer))


#: Half-width (log units) added to nominal ratios when placing lights on packages: about
#: the P5..P95 half-width of a ratio with 5 % resistors and 10 % capacitors (estimate from
#: the spread analysis of such pairs).
PLAN_BAND = 0.15


def _plan_clearance(periods_s: Sequence[float], idx: int, others: Sequence[int]) -> float:
    """Smallest clearance of light ``idx``'s period against the lights already placed."""
    worst = math.inf
    for j in others:
        x = math.log(periods_s[idx] / periods_s[j])
        worst = min(worst, float(clearance(x - PLAN_BAND, x + PLAN_BAND)))
    return worst


def package_limit_error(plan: PackagePlan, max_packages: int) -> str | None:
    """One line explaining why ``plan`` needs more than ``max_packages``, or None."""
    if len(plan.packages) <= max_packages:
        return None
    holds = (f"one {GATES_PER_PACKAGE}-gate package holds {GATES_PER_PACKAGE}"
             if max_packages == 1 else
             f"{max_packages} {GATES_PER_PACKAGE}-gate packages hold "
             f"{max_packages * GATES_PER_PACKAGE}")
    return (f"{plan.describe()}; {holds}, and the build needs {len(plan.packages)} packages "
            f"(--max-packages {max_packages}); allow more packages, drive LEDs without a "
            "buffer (--no-buffered), leave out the dusk detector (--no-dusk-detector) or "
            "use fewer lights")


# ============================================================================ ratios

def simple_ratios(max_q: int = MAX_RATIO_Q) -> tuple[Fraction, ...]:
    """Every p/q <= 1 in lowest terms with q <= ``max_q`` (1/4, 1/3, 1/2, 2/3, 3/4, 1)."""
    if not (isinstance(max_q, int) and max_q >= 1):
        raise RequestError(f"largest ratio denominator {max_q!r}: give a whole number >= 1")
    return tuple(sorted({Fraction(p, q) for q in range(1, max_q + 1) for p in range(1, q + 1)}))


def _zones(margin: float, max_q: int) -> tuple[np.ndarray, float]:
    """Centres (log of the ratio, both orders) and half-width of the forbidden zones."""
    logs = [math.log(float(f)) for f in simple_ratios(max_q)]
    centres = np.array(sorted(set(logs + [-x for x in logs])))
    return centres, math.log1p(margin)


def clearance(log_lo, log_hi, margin: float = DEFAULT_LOCK_MARGIN,
              max_q: int = MAX_RATIO_Q):
    """Distance (log units) from the ratio interval [lo, hi] to the nearest forbidden zone.

    ``log_lo``/``log_hi`` bound ln(Ta/Tb) (arrays broadcast). A zone is ln(p/q) +/-
    ln(1 + margin) for each simple ratio, in either order. Negative: the interval reaches
    into a zone by that much.
    """
    centres, h = _zones(margin, max_q)
    lo = np.asarray(log_lo, dtype=float)[..., None]
    hi = np.asarray(log_hi, dtype=float)[..., None]
    dist = np.maximum(lo - (centres + h), (centres - h) - hi)
    return np.min(dist, axis=-1)


def nearest_ratio(ratio: float, max_q: int = MAX_RATIO_Q) -> Fraction:
    """The simple ratio (shorter over longer) nearest in log to ``ratio`` (folded to <= 1)."""
    r = ratio if ratio <= 1 else 1.0 / ratio
    return min(simple_ratios(max_q), key=lambda f: abs(math.log(r / float(f))))


@dataclass(frozen=True)
class PairRisk:
    """The period ratio of two lights on one package against the simple ratios."""

    a: int  # light index (shorter period)
    b: int  # light index (longer period)
    ratio: float  # nominal period ratio, shorter over longer
    band: tuple[float, float]  # P5..P95 of that ratio over builds (nan: not known)
    nearest: str  # nearest simple ratio, "2:3"
    nominal_near: bool  # the nominal ratio is within the margin of a simple ratio
    band_near: bool  # some of the band is
    clearance: float  # log units from the band (or nominal) to the nearest zone; < 0: inside

    @property
    def at_risk(self) -> bool:
        return self.nominal_near or self.band_near


def pair_band(samples_a: np.ndarray, samples_b: np.ndarray) -> tuple[float, float]:
    """P5 and P95 of ln(Ta/Tb) over paired builds (independent draws), log units."""
    a = np.asarray(samples_a, dtype=float)
    b = np.asarray(samples_b, dtype=float)
    a, b = a[np.isfinite(a) & (a > 0)], b[np.isfinite(b) & (b > 0)]
    n = min(a.size, b.size)
    if n < 20:
        return math.nan, math.nan
    x = np.log(a[:n] / b[:n])
    lo, hi = np.percentile(x, (5.0, 95.0))
    return float(lo), float(hi)


def lock_risks(periods_s: Sequence[float], groups: Sequence[int],
               samples: Sequence[np.ndarray] | None = None, *,
               margin: float = DEFAULT_LOCK_MARGIN,
               max_q: int = MAX_RATIO_Q) -> tuple[PairRisk, ...]:
    """Every pair of lights in the same group (package), checked against simple ratios.

    Parameters
    ----------
    periods_s : nominal period of each light, s.
    groups : package number of each light (pairs in different packages are skipped).
    samples : per light, periods of Monte Carlo builds (s) for the ratio band, or None.
    margin : fraction around each simple ratio counted as near.
    """
    if not (0 < margin < 0.5):
        raise RequestError(f"lock margin {margin!r}: give a fraction between 0 and 0.5, "
                           "such as 3%")
    out = []
    for i, j in itertools.combinations(range(len(periods_s)), 2):
        if groups[i] != groups[j]:
            continue
        a, b = (i, j) if periods_s[i] <= periods_s[j] else (j, i)
        x = math.log(periods_s[a] / periods_s[b])
        nominal_c = float(clearance(x, x, margin, max_q))
        lo = hi = math.nan
        band_c = math.nan
        if samples is not None:
            lo, hi = pair_band(samples[a], samples[b])
            if math.isfinite(lo):
                band_c = float(clearance(lo, hi, margin, max_q))
        f = nearest_ratio(math.exp(x), max_q)
        out.append(PairRisk(
            a=a, b=b, ratio=math.exp(x),
            band=(math.exp(lo), math.exp(hi)) if math.isfinite(lo) else (math.nan, math.nan),
            nearest=f"{f.numerator}:{f.denominator}", nominal_near=nominal_c < 0,
            band_near=bool(math.isfinite(band_c) and band_c < 0),
            clearance=band_c if math.isfinite(band_c) else nominal_c))
    return tuple(out)


# ============================================================================ spread-out

@dataclass(frozen=True, eq=False)
class PeriodOptions:
    """Standard-value variants of one light's timing network within the tolerance."""

    values: tuple[dict[str, float], ...]  # full value sets (ohm, farad)
    periods_s: np.ndarray  # s, nominal period of each
    original: int  # index of the solved circuit's own values (-1: outside the tolerance)


def period_options(design, asked_s: float, tolerance: float, *, r_series: str = "E24",
                   c_series: str = "E12", r_values=None, c_values=None,
                   levels: tuple[float, float] | None = None) -> PeriodOptions:
    """Variants of ``design``'s timing values whose period is within ``tolerance`` of
    ``asked_s``, keeping the flash and LED peak within ``VARIANT_FIGURE_FACTOR``.

    One fast-engine call evaluates every combination of the timing resistors (along
    ``r_series``) and the timing capacitor (along its kind's series) within
    ``VARIANT_VALUE_FACTOR`` of the solved values. ``r_values`` / ``c_values`` (ohm,
    farad) replace the series with the values at hand (a parts drawer). ``levels``
    (VT+, VT- in V): the switching levels the figures are computed with (the solver's
    median chip); default the typical chip's.
    """
    from pulsepick.circuits.base import RUNS, get_core
    from pulsepick.engine import fast
    from pulsepick.parts.capacitor import get_cap_kind
    from pulsepick.series import get_series

    core = get_core(design.topo.core)
    grids = []
    names = []
    for p in core.params:
        v = float(design.values[p.name])
        lo_v, hi_v = v / VARIANT_VALUE_FACTOR, v * VARIANT_VALUE_FACTOR
        given = r_values if p.kind == "R" else c_values
        if given is not None:
            arr = np.asarray(given, dtype=float)
            vals = arr[(arr >= lo_v) & (arr <= hi_v)]
        elif p.kind == "R":
            vals = get_series(r_series).values(lo_v, hi_v)
        else:
            kind = get_cap_kind(design.parts.timing_cap)
            lo = max(v / VARIANT_VALUE_FACTOR, kind.c_min_f)
            hi = min(v * VARIANT_VALUE_FACTOR, kind.c_max_f)
            vals = get_series(c_series).values(lo, hi) if lo <= hi else np.array([])
        vals = np.unique(np.r_[vals, v])
        grids.append(vals)
        names.append(p.name)
    mesh = np.meshgrid(*grids, indexing="ij")
    flat = {n: m.ravel() for n, m in zip(names, mesh, strict=True)}
    kw = {} if levels is None else {"vt_plus": levels[0], "vt_minus": levels[1]}
    env, powered = design.env(**kw)
    base = dict(design.working_values(env))
    factor = design.timing_cap_factor(env)
    values = {**base, **flat}
    values["c1"] = flat["c1"] * factor
    figs = fast.evaluate(design.topo, values, env, powered=powered)
    ref = design.fast(**kw)
    f0, i0 = float(ref.flash_s[0]), float(ref.led_peak_a[0])
    period = np.asarray(figs.period_s, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = (np.asarray(figs.status) == RUNS) & np.isfinite(period)
        ok &= np.abs(np.log(period / asked_s)) <= math.log1p(tolerance) + 1e-12
        ok &= np.abs(np.log(np.asarray(figs.flash_s) / f0)) <= math.log(VARIANT_FIGURE_FACTOR)
        ok &= np.abs(np.log(np.asarray(figs.led_peak_a) / i0)) <= math.log(
            VARIANT_FIGURE_FACTOR)
    idx = np.flatnonzero(ok)
    sets = tuple({**design.values, **{n: float(flat[n][k]) for n in names}} for k in idx)
    original = next((k for k, s in enumerate(sets)
                     if all(math.isclose(s[n], design.values[n]) for n in names)), -1)
    return PeriodOptions(values=sets, periods_s=period[idx], original=original)


@dataclass(frozen=True)
class SpreadOutChoice:
    """The periods chosen so every pair on a package keeps clear of simple ratios."""

    asked_s: tuple[float, ...]  # s, periods asked
    chosen: tuple[int, ...]  # per light, index into its options
    chosen_s: tuple[float, ...]  # s, nominal periods chosen
    min_clearance: float  # log units, smallest over the pairs (bands where known)
    success: bool  # every pair clear
    tolerance: float  # fraction
    margin: float  # fraction
    message: str


def choose_periods(asked_s: Sequence[float], options: Sequence[np.ndarray],
                   pairs: Sequence[tuple[int, int]],
                   offsets: dict[tuple[int, int], tuple[float, float]], *,
                   margin: float = DEFAULT_LOCK_MARGIN, max_q: int = MAX_RATIO_Q,
                   tolerance: float = DEFAULT_PERIOD_TOLERANCE) -> SpreadOutChoice:
    """Pick one period per light from ``options`` (s) to clear every pair's band.

    ``offsets[(i, j)]`` bounds the pair's band around its nominal log ratio ln(Ti/Tj)
    (P5 and P95 offsets, log units). The search maximises the smallest clearance (up to a
    small cushion) and then the closeness to ``asked_s``; it runs coordinate sweeps from
    the nearest options and from golden-ratio offsets, and keeps the best.
    """
    n = len(asked_s)
    logs = [np.log(np.asarray(o, dtype=float)) for o in options]
    if any(o.size == 0 for o in logs):
        empty = [i for i, o in enumerate(logs) if o.size == 0]
        raise RequestError(f"lights {', '.join(str(i + 1) for i in empty)} have no standard-"
                           f"value circuit within {tolerance:.0%} of the period asked; "
                           "widen --period-tolerance")
    la = np.log(np.asarray(asked_s, dtype=float))

    def key(choice: list[int]) -> tuple[float, float, float]:
        t = [logs[i][choice[i]] for i in range(n)]
        worst = math.inf
        for i, j in pairs:
            lo, hi = offsets.get((i, j), (0.0, 0.0))
            x = t[i] - t[j]
            worst = min(worst, float(clearance(x + lo, x + hi, margin, max_q)))
        dev = sum(abs(t[i] - la[i]) for i in range(n))
        return min(worst, CLEARANCE_CUSHION), -dev, worst

    def nearest(i: int, target: float) -> int:
        return int(np.argmin(np.abs(logs[i] - target)))

    span = math.log1p(tolerance)
    starts = [[nearest(i, la[i]) for i in range(n)]]
    for k in range(1, 6):
        starts.append([nearest(i, la[i] + span * (2 * ((i * GOLDEN + k / 6) % 1.0) - 1))
                       for i in range(n)])
    best, best_key = None, None
    for start in starts:
        choice = list(start)
        cur = key(choice)
        for _ in range(25):
            changed = False
            for i in range(n):
                for k in range(logs[i].size):
                    if k == choice[i]:
                        continue
                    trial = choice.copy()
                    trial[i] = k
                    tk = key(trial)
                    if tk > cur:
                        choice, cur, changed = trial, tk, True
            if not changed:
                break
        if best_key is None or cur > best_key:
            best, best_key = choice, cur
    assert best is not None and best_key is not None
    worst = best_key[2]
    ok = worst >= 0 or not pairs
    chosen_s = tuple(float(np.exp(logs[i][best[i]])) for i in range(n))
    msg = ("every pair on a package keeps clear of the simple ratios" if ok else
           f"no choice within {tolerance:.0%} keeps every pair clear: the closest pair "
           f"reaches {-worst * 100:.1f} % into a zone; widen --period-tolerance, use tighter "
           "timing parts (1 % resistors, 5 % capacitors), or put the pair on separate packages")
    return SpreadOutChoice(asked_s=tuple(float(x) for x in asked_s), chosen=tuple(best),
                           chosen_s=chosen_s, min_clearance=float(worst) if pairs else math.inf,
                           success=bool(ok), tolerance=tolerance, margin=margin, message=msg)


def golden_periods(base_s: float, count: int, span: float = GOLDEN) -> tuple[float, ...]:
    """``count`` periods from ``base_s`` stepping by the golden ratio in log-period.

    Each step multiplies the period by ``span`` (default the golden ratio): no two periods
    ever stand in a rational ratio, the most irrational spacing there is. A starting
    proposal for lights whose periods are free.
    """
    if not (base_s > 0 and count >= 1):
        raise RequestError("golden periods need a period above 0 and a count of at least 1")
    return tuple(base_s * span**k for k in range(count))


def ratio_samples(design, *, builds: int = BAND_BUILDS, seed: int = 0,
                  resistor_tol_pct=None) -> np.ndarray:
    """Periods (s) of Monte Carlo builds with only the light's own parts varying."""
    from pulsepick.analysis.spread import spread

    res = spread(design, builds=builds, seed=seed, shares=False, corners=False,
                 vary=("resistors", "capacitors"), resistor_tol_pct=resistor_tol_pct)
    return np.asarray(res.samples["period_s"], dtype=float)


# ============================================================================ budget

def combined_load_curve(curves: Sequence[LoadCurve], label: str | None = None) -> LoadCurve:
    """The lights' load curves added into one (for the night model).

    On the union of the grids (each curve interpolated): supply currents add; the build is
    lit where every light is lit (the night stops when the first light goes dark); the
    period is the interval between flashes of all lights together, 1/sum(1/T), so the
    night's flash count counts every light's flashes; effective current and intensity add
    (all lights seen together); the flash and LED peak are the largest of the lights.
    """
    if not curves:
        raise RequestError("no load curves to add")
    if len(curves) == 1:
        return curves[0]
    grid = np.unique(np.concatenate([c.supply_v for c in curves]))
    lo = max(float(c.supply_v[0]) for c in curves)
    hi = min(float(c.supply_v[-1]) for c in curves)
    grid = grid[(grid >= lo - 1e-12) & (grid <= hi + 1e-12)]
    if grid.size < 2:
        raise RequestError("the lights' load curves share no supply range")

    def at(c: LoadCurve, name: str) -> np.ndarray:
        return np.interp(grid, c.supply_v, getattr(c, name))

    def lit(c: LoadCurve) -> np.ndarray:
        stop = c.light_stops_below_v()
        if math.isnan(stop):
            return np.ones(grid.shape, dtype=bool)
        if math.isinf(stop):
            # dark at the top (over the chip's supply range): lit where both neighbouring
            # grid points of the light's own curve are lit
            return np.interp(grid, c.supply_v, c.lit.astype(float)) > 1.0 - 1e-9
        return grid >= stop

    lit_all = np.logical_and.reduce([lit(c) for c in curves])
    current = np.sum([at(c, "supply_avg_a") for c in curves], axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        rate = np.sum([np.where(np.isfinite(at(c, "period_s")), 1.0 / at(c, "period_s"), 0.0)
                       for c in curves], axis=0)
        period = np.where(rate > 0, 1.0 / rate, np.nan)
    period = np.where(lit_all, period, np.nan)
    label = label or " + ".join(c.label for c in curves)
    added = (f"{len(curves)} lights added: currents and effective brightness add, the period "
             "shown is the interval between flashes of all lights together, and the night "
             "stops when the first light goes dark")
    notes = (*dict.fromkeys(n for c in curves for n in c.notes), added)
    return LoadCurve(
        label=label, supply_v=grid, supply_avg_a=current, period_s=period,
        flash_s=np.fmax.reduce([at(c, "flash_s") for c in curves]),
        led_peak_a=np.fmax.reduce([at(c, "led_peak_a") for c in curves]),
        effective_a=np.sum([at(c, "effective_a") for c in curves], axis=0),
        effective_cd=np.sum([at(c, "effective_cd") for c in curves], axis=0),
        lit=lit_all, notes=notes)


def with_values(design, values: dict[str, float]):
    """``design`` with new component values."""
    return replace(design, values=dict(values))


# ============================================================================ parts

def build_part_lines(names: Sequence[str], part_lines: Sequence[tuple], plan: PackagePlan, *,
                     storage=None, panel=None, charge_diode: str | None = None,
                     hold_lines: Sequence = ()) -> tuple:
    """Every part of the build, numbered across the lights (``PartLine`` tuple).

    Chips come first, one line per package (U1, U2, ...); then each light's resistors,
    capacitors, diodes and LED, renumbered so designators run across the build, with the
    light's name in front of the role; then the storage, the panel and its charge diode.
    Identical parts are summed by :func:`pulsepick.partslist.buy_rows`.
    """
    from pulsepick.engine.environment import ChipSpec, chip_model
    from pulsepick.partslist import PartLine, number_light_parts

    lines = []
    for pkg in plan.packages:
        model = chip_model(ChipSpec(family=pkg.family))
        who = ", ".join(names[i] for i in pkg.lights)
        if pkg.is_timer:
            role = f"astable timer ({who})"
            note = "CMOS part only (a bipolar 555 draws milliamperes); reset pin to the supply"
        else:
            parts = [f"Schmitt gates for {who}"] if who else []
            if pkg.dusk:
                parts.append("the dusk detector" + (" and its hold inverter"
                                                    if plan.dusk > 1 else ""))
            role = " and ".join(parts)
            unused = GATES_PER_PACKAGE - pkg.gates_used
            note = (f"uses {pkg.gates_used} of {GATES_PER_PACKAGE} gates"
                    + (f"; tie the {unused} unused {'input' if unused == 1 else 'inputs'} to ground or the supply (never "
                       "leave CMOS inputs open)" if unused else ""))
        lines.append(PartLine(
            ref=f"U{pkg.number}", kind="chip", value=None, unit="", display=model.name,
            code=pkg.family, series="", tolerance="", tolerance_pct=None, dielectric="",
            rating=f"{model.vdd_min_v:g}-{model.vdd_max_v:g} V", role=role, note=note))
    counters: dict[str, int] = {}

    def ref(prefix: str) -> str:
        counters[prefix] = counters.get(prefix, 0) + 1
        return f"{prefix}{counters[prefix]}"

    for name, own in zip(names, number_light_parts(part_lines, counters), strict=True):
        lines.extend(replace(line, role=f"{name}: {line.role}") for line in own)
    for line in hold_lines:  # the dusk detector's hold diodes (pulsepick.analysis.gating)
        lines.append(replace(line, ref=ref("D")))
    if storage is not None:
        lines.append(PartLine(
            ref=ref("C"), kind="storage", value=storage.capacitance_f, unit="F",
            display=storage.name, code=storage.key, series="",
            tolerance=f"-{storage.tol_minus_pct:g}/+{storage.tol_plus_pct:g} %",
            tolerance_pct=max(storage.tol_minus_pct, storage.tol_plus_pct), dielectric="",
            rating=f"{storage.v_rated_v:g} V", role="energy storage for every light",
            note="polarised; a charged supercapacitor can deliver amperes into a short"))
    if panel is not None:
        lines.append(PartLine(
            ref="PV1", kind="panel", value=None, unit="", display=panel.name, code=panel.key,
            series="", tolerance="", tolerance_pct=None, dielectric="",
            rating=f"Voc {panel.voc_v:g} V, Isc {panel.isc_a * 1e3:g} mA",
            role="solar cell (also the dusk sensor)", note=""))
        if charge_diode is not None:
            from pulsepick.parts.diode import get_diode

            d = get_diode(charge_diode)
            lines.append(PartLine(
                ref=ref("D"), kind="diode", value=None, unit="", display=d.name,
                code=charge_diode, series="", tolerance="", tolerance_pct=None, dielectric="",
                rating="", role="charge diode from the panel to the storage",
                note="cathode to the storage"))
    return tuple(lines)
