"""Spread-out periods: each light's standard-value variants and the search that keeps
every pair clear of simple ratios (see :mod:`pulsepick.analysis.multi`)."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pulsepick.analysis.multi.ratios import DEFAULT_LOCK_MARGIN, MAX_RATIO_Q, clearance
from pulsepick.design import levels_kw
from pulsepick.errors import RequestError
from pulsepick.hints import hint

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
    kw = levels_kw(levels)
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
                           f"widen {hint('period_tolerance')}")
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
           f"reaches {-worst * 100:.1f} % into a zone; widen {hint('period_tolerance')}, use "
           "tighter timing parts (1 % resistors, 5 % capacitors), or put the pair on separate "
           "packages")
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
