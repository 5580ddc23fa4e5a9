"""Lock risk as a share of builds: how many builds have two lights on one package near p:q.

Two oscillators on one package share its supply pin, ground and substrate; tuned near a
simple ratio they pull into step (injection locking, common practice). A pair is counted
near a lock in a build when the ratio of its two periods, shorter over longer, lies within
``margin`` of a simple ratio p:q with q <= 4 (the zones of
:func:`pulsepick.analysis.multi.clearance`).

The builds are a seeded Monte Carlo in which each light's own resistors and capacitors
vary independently (their tolerances and tempcos, ``pulsepick.analysis.spread``), while
what the package shares is drawn once per build and given to every light on it: the
chip's thresholds and output resistance, the supply (uniform over the night's range) and
the ambient temperature. The shared draws move the periods of one package together, and
the fast engine carries what they do not cancel in the ratio.

The share is then a count: builds with some pair near a lock over all builds. Its standard
error is sqrt(s(1-s)/n) (binomial proportion, common practice).

Minimising the share
--------------------
:func:`minimise_share` picks one period per light from its standard-value variants.
A variant's builds are its own builds scaled by the ratio of the variant's nominal period
to the solved one (the variants change R and C by a few E-series steps; the relative
spread of the period stays nearly the same, an estimate). A coordinate search over the
choices minimises, in turn, the pairs whose median build sits near a lock (with wide
bands the share changes little as a median moves onto p:q, but two lights in step on the
build one expects is what a maker sees), the share, and the distance from the periods
asked.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pulsepick.analysis.multi.ratios import DEFAULT_LOCK_MARGIN, MAX_RATIO_Q, _zones
from pulsepick.errors import RequestError
from pulsepick.hints import Hint, hint

#: Monte Carlo builds of the lock share (per package).
LOCK_BUILDS = 2000
#: Lock share a spread-out build may keep and still count as clear: one build in twenty
#: (design choice).
ACCEPTABLE_LOCK_SHARE = 0.05
#: Grades of a lock share, each the highest share it covers (design choice): a lock share
#: is a risk to weigh, not a failure of the solve, unless a limit is asked for.
LOCK_GRADES = ((0.0, "none"), (0.01, "slight"), (ACCEPTABLE_LOCK_SHARE, "low"),
               (0.20, "moderate"), (1.0, "high"))
#: Tighter timing parts offered as a remedy: 1 % resistors, 5 % capacitors (E96 and the
#: usual film tolerance, ref:e-series-tolerances).
TIGHT_RESISTOR_PCT = 1.0
TIGHT_CAP_PCT = 5.0


@dataclass(frozen=True)
class PairShare:
    """The share of builds in which two lights on one package come near a lock."""

    a: int  # light index
    b: int  # light index
    package: int  # package number
    share: float  # fraction of builds near a p:q lock
    nearest: str  # the simple ratio most often near, "2:3" ("-" when never)


@dataclass(frozen=True)
class LockShare:
    """Lock risk as a share of builds, per pair and per package, with its inputs."""

    pairs: tuple[PairShare, ...]
    packages: dict[int, float]  # package number -> share of builds with any pair near
    share: float  # share of builds with any pair on any package near a lock
    builds: int
    seed: int
    margin: float  # fraction around each p:q
    max_q: int
    stderr: float  # binomial standard error of ``share``
    log_dev: tuple[np.ndarray, ...]  # per light, ln(T_build / T_nominal) of each build

    def pair(self, a: int, b: int) -> PairShare:
        for p in self.pairs:
            if {p.a, p.b} == {a, b}:
                return p
        raise KeyError((a, b))


def near_lock(x: np.ndarray, margin: float = DEFAULT_LOCK_MARGIN,
              max_q: int = MAX_RATIO_Q) -> tuple[np.ndarray, np.ndarray]:
    """For log ratios ``x`` = ln(Ta/Tb): (near any p:q, index of the nearest zone centre)."""
    centres, h = _zones(margin, max_q)
    d = np.abs(np.asarray(x, dtype=float)[..., None] - centres)
    k = np.argmin(d, axis=-1)
    return np.take_along_axis(d, k[..., None], axis=-1)[..., 0] <= h, k


def _ratio_name(centre: float) -> str:
    from fractions import Fraction

    r = math.exp(-abs(centre))
    f = Fraction(r).limit_denominator(MAX_RATIO_Q)
    return f"{f.numerator}:{f.denominator}"


def package_builds(designs: Sequence, *, builds: int = LOCK_BUILDS, seed: int = 0,
                   supply_range_v: tuple[float, float] | None = None,
                   resistor_tol_pct: Sequence | None = None, cap_tol=None,
                   temp_c: float | None = None) -> tuple[np.ndarray, ...]:
    """Periods (s) of ``builds`` builds of the lights of one package, shared draws shared.

    ``designs`` are the lights on the package (same family). Each light's parts get their
    own seeded stream (seed + light position); the chip thresholds, output resistance,
    supply and temperature come from the package's stream (``seed``) and are the same
    for every light in a build. ``temp_c`` (C) holds every build at one temperature
    (the same draws otherwise), as where the builds are trimmed.
    """
    # the draws and the batch evaluation of the spread analysis, reused so the lock share
    # varies each source exactly as the spread does
    from pulsepick.analysis.spread import (
        DEFAULT_TEMP_RANGE_C,
        SOURCES,
        _draw,
        _evaluate,
        _run_batch,
        _temperature_factors,
        part_tolerances,
    )

    if not designs:
        raise RequestError("a package needs at least one light for its lock share")
    shared_seqs = dict(zip(SOURCES, np.random.SeedSequence(seed).spawn(len(SOURCES)),
                           strict=True))
    g_temp = np.random.default_rng(shared_seqs["temperature"])
    temp_draw = g_temp.uniform(*DEFAULT_TEMP_RANGE_C, builds)
    temps = temp_draw if temp_c is None else np.full(builds, float(temp_c))
    vary = frozenset(SOURCES) if supply_range_v is not None else \
        frozenset(s for s in SOURCES if s != "supply")
    out = []
    for k, design in enumerate(designs):
        r_tol = None if resistor_tol_pct is None else resistor_tol_pct[k]
        tols = part_tolerances(design, r_tol, cap_tol)
        names = [t.name for t in tols]
        own = _draw(design, tols, builds, seed + 1 + k, DEFAULT_TEMP_RANGE_C,
                    supply_range_v, vary)
        shared = _draw(design, tols, builds, seed, DEFAULT_TEMP_RANGE_C, supply_range_v,
                       vary)
        # the package's draws: supply, output resistance, chip thresholds, temperature
        own.vdd, own.rout_u, own.chip_seed = shared.vdd, shared.rout_u, shared.chip_seed
        own.temp = _temperature_factors(design, tols, temps,
                                        np.random.default_rng(seed + 101 + k))
        batch = _run_batch(design, own, names, builds, None)
        fig = _evaluate(design, batch)
        out.append(np.asarray(fig.period_s, dtype=float).reshape(-1))
    return tuple(out)


def lock_share(designs: Sequence, groups: Sequence[int], *, builds: int = LOCK_BUILDS,
               seed: int = 0, margin: float = DEFAULT_LOCK_MARGIN, max_q: int = MAX_RATIO_Q,
               supply_range_v: tuple[float, float] | None = None,
               resistor_tol_pct: Sequence | None = None, cap_tol=None) -> LockShare:
    """The share of builds in which a pair on a package comes within ``margin`` of p:q.

    Parameters
    ----------
    designs : the lights' circuits (``Design``).
    groups : package number of each light; pairs on different packages never lock.
    builds, seed : Monte Carlo builds per package and their seed.
    margin : fraction around each simple ratio (3 % by default, an estimate).
    supply_range_v : (low, high) V the supply runs over in the night; None: nominal.
    resistor_tol_pct : per light, the resistor tolerances (percent, as for
        :func:`pulsepick.analysis.spread.part_tolerances`), or None.
    """
    if not (0 < margin < 0.5):
        raise RequestError(f"lock margin {margin!r}: give a fraction between 0 and 0.5")
    n = len(designs)
    log_dev: list[np.ndarray] = [np.zeros(builds)] * n
    nominal = [float(d.fast().period_s[0]) for d in designs]
    for pkg in sorted(set(groups)):
        idx = [i for i in range(n) if groups[i] == pkg]
        periods = package_builds([designs[i] for i in idx], builds=builds, seed=seed + 7 * pkg,
                                 supply_range_v=supply_range_v,
                                 resistor_tol_pct=None if resistor_tol_pct is None else
                                 [resistor_tol_pct[i] for i in idx], cap_tol=cap_tol)
        for i, p in zip(idx, periods, strict=True):
            with np.errstate(divide="ignore", invalid="ignore"):
                log_dev[i] = np.log(p / nominal[i])
    return share_of(nominal, log_dev, groups, margin=margin, max_q=max_q, seed=seed)


def share_of(periods_s: Sequence[float], log_dev: Sequence[np.ndarray], groups: Sequence[int],
             *, margin: float = DEFAULT_LOCK_MARGIN, max_q: int = MAX_RATIO_Q,
             seed: int = 0) -> LockShare:
    """The lock share of nominal ``periods_s`` (s) with each build's deviations ``log_dev``.

    A build whose period is not finite (stalled) counts as not near a lock.
    """
    centres, _ = _zones(margin, max_q)
    n = len(periods_s)
    builds = int(log_dev[0].size) if n else 0
    lt = [math.log(p) + np.asarray(d, dtype=float) for p, d in zip(periods_s, log_dev,
                                                                     strict=True)]
    pairs = []
    by_pkg: dict[int, np.ndarray] = {g: np.zeros(builds, dtype=bool) for g in set(groups)}
    for i, j in itertools.combinations(range(n), 2):
        if groups[i] != groups[j]:
            continue
        x = lt[i] - lt[j]
        ok = np.isfinite(x)
        near, k = near_lock(np.where(ok, x, 10.0), margin, max_q)
        near &= ok
        by_pkg[groups[i]] |= near
        if near.any():
            name = _ratio_name(float(centres[np.bincount(k[near]).argmax()]))
        else:
            name = "-"
        pairs.append(PairShare(a=i, b=j, package=groups[i], share=float(near.mean()),
                               nearest=name))
    anyb = np.zeros(builds, dtype=bool)
    for v in by_pkg.values():
        anyb |= v
    s = float(anyb.mean()) if builds else 0.0
    return LockShare(pairs=tuple(pairs), packages={g: float(v.mean()) for g, v in
                                                   by_pkg.items()},
                     share=s, builds=builds, seed=seed, margin=margin, max_q=max_q,
                     stderr=math.sqrt(s * (1 - s) / builds) if builds else 0.0,
                     log_dev=tuple(np.asarray(d) for d in log_dev))


def minimise_share(asked_s: Sequence[float], options: Sequence[np.ndarray],
                   base: LockShare, base_s: Sequence[float], groups: Sequence[int],
                   starts: Sequence[Sequence[int]] = ()) -> tuple[list[int], LockShare]:
    """One period per light from ``options`` (s): first the fewest pairs whose median
    build sits near a lock (two lights in step on the build one expects), then the least
    lock share, then the nearest to ``asked_s``. The builds of ``base`` (at periods
    ``base_s``) are scaled to each option (see the module doc). Returns the chosen
    indices and their share."""
    n = len(asked_s)
    opts = [np.asarray(o, dtype=float) for o in options]
    if any(o.size == 0 for o in opts):
        raise RequestError("a light has no standard-value variant within the period "
                           f"tolerance; widen {hint('period_tolerance')}")
    la = np.log(np.asarray(asked_s, dtype=float))
    pairs = [(i, j) for i, j in itertools.combinations(range(n), 2) if groups[i] == groups[j]]
    builds = int(base.log_dev[0].size) if n else 0
    cache: dict[tuple[int, int, int, int], np.ndarray] = {}

    def near_pair(i: int, j: int, ki: int, kj: int) -> np.ndarray:
        # the builds of one pair near a lock, as share_of counts them (cached: the
        # coordinate search changes one light at a time)
        got = cache.get((i, j, ki, kj))
        if got is None:
            x = ((math.log(float(opts[i][ki])) + np.asarray(base.log_dev[i], dtype=float))
                 - (math.log(float(opts[j][kj])) + np.asarray(base.log_dev[j], dtype=float)))
            ok = np.isfinite(x)
            near, _ = near_lock(np.where(ok, x, 10.0), base.margin, base.max_q)
            got = cache[(i, j, ki, kj)] = near & ok
        return got

    # each pair's median log ratio relative to its nominal one (the builds' own offset)
    med_off = {}
    for i, j in pairs:
        d = np.asarray(base.log_dev[i], dtype=float) - np.asarray(base.log_dev[j], dtype=float)
        d = d[np.isfinite(d)]
        med_off[(i, j)] = float(np.median(d)) if d.size else 0.0

    def median_locks(choice) -> int:
        # pairs whose median build sits near a lock: in step on the build one expects
        x = np.array([math.log(float(opts[i][choice[i]])) - math.log(float(opts[j][choice[j]]))
                      + med_off[(i, j)] for i, j in pairs])
        return int(near_lock(x, base.margin, base.max_q)[0].sum()) if pairs else 0

    def key(choice):
        per = [float(opts[i][choice[i]]) for i in range(n)]
        anyb = np.zeros(builds, dtype=bool)
        for i, j in pairs:
            anyb |= near_pair(i, j, choice[i], choice[j])
        dev = sum(abs(math.log(per[i]) - la[i]) for i in range(n))
        return (median_locks(choice), float(anyb.mean()) if builds else 0.0, dev), per

    start = [int(np.argmin(np.abs(np.log(o) - math.log(b)))) for o, b in zip(opts, base_s,
                                                                            strict=True)]
    firsts = [*(list(c) for c in starts), start,
              [int(np.argmin(np.abs(np.log(o) - la[i]))) for i, o in enumerate(opts)]]
    best = None
    for choice in firsts:
        cur, res = key(choice)
        for _ in range(20):
            changed = False
            for i in range(n):
                for k in range(opts[i].size):
                    if k == choice[i]:
                        continue
                    trial = list(choice)
                    trial[i] = k
                    tk, tres = key(trial)
                    if tk < cur:
                        choice, cur, res, changed = trial, tk, tres, True
            if not changed:
                break
        if best is None or cur < best[0]:
            best = (cur, list(choice), res)
    assert best is not None
    return best[1], share_of(best[2], base.log_dev, groups, margin=base.margin,
                             max_q=base.max_q, seed=base.seed)


@dataclass(frozen=True)
class Remedy:
    """One way to lower the lock share, with the share it leaves."""

    action: str  # what to do, in words
    share: float  # share of builds near a lock after it
    option: Hint | None  # the option that does it (pulsepick.hints), None when none


def lock_grade(share: float) -> str:
    """The grade of a lock share (fraction of builds): none, slight, low, moderate, high."""
    for top, name in LOCK_GRADES:
        if share <= top:
            return name
    return LOCK_GRADES[-1][1]


def rank_remedies(remedies: Sequence[Remedy]) -> tuple[Remedy, ...]:
    """Remedies from the one leaving the least share up (ties keep their order)."""
    return tuple(sorted(remedies, key=lambda r: r.share))


__all__ = [
    "ACCEPTABLE_LOCK_SHARE",
    "LOCK_BUILDS",
    "LOCK_GRADES",
    "TIGHT_CAP_PCT",
    "TIGHT_RESISTOR_PCT",
    "LockShare",
    "PairShare",
    "Remedy",
    "lock_grade",
    "lock_share",
    "minimise_share",
    "near_lock",
    "package_builds",
    "rank_remedies",
    "share_of",
]
