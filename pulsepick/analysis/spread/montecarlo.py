"""The seeded Monte Carlo spread of a design (:func:`spread`, :class:`SpreadResult`)."""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from pulsepick.circuits.base import DARK, Figures, RUNS, STALLS, UNPOWERED
from pulsepick.design import Design
from pulsepick.errors import RequestError
from pulsepick.analysis.spread.builds import (
    _Batch, _draw, _evaluate_chunked, _run_batch, SAMPLES_ALL_UP_TO,
)
from pulsepick.analysis.spread.corners import _corner_batch
from pulsepick.analysis.spread.tolerances import (
    _check_range, _vary_set, DEFAULT_BUILDS, DEFAULT_TEMP_RANGE_C, DEFAULT_YIELD_BAND,
    FIGURE_KEYS, part_tolerances, PartTolerance, QUANTILE_LEVELS, SHARE_BUILDS, SOURCES,
)


def _oscillates(fig: Figures) -> np.ndarray:
    st = np.asarray(fig.status)
    return (st == RUNS) | (st == DARK)


def _slice(fig: Figures, sl: slice) -> dict[str, np.ndarray]:
    out = {k: np.asarray(getattr(fig, k), dtype=float).reshape(-1)[sl] for k in FIGURE_KEYS}
    out["status"] = np.asarray(fig.status).reshape(-1)[sl]
    return out


def _good(block: dict[str, np.ndarray], key: str) -> np.ndarray:
    st = block["status"]
    vals = block[key]
    return vals[((st == RUNS) | (st == DARK)) & np.isfinite(vals)]


@dataclass(frozen=True, eq=False)
class SpreadResult:
    """Monte Carlo spread and worst-case corners of one design (SI units).

    ``quantiles[key]`` is (P5, P50, P95) over the builds that oscillate with the chip
    powered (status runs or dark); ``mc_range`` and ``corners`` are (min, max) of the
    same builds and of the corner enumeration. ``shares`` gives each source's share of
    the period's variance (one source varying at a time, normalised to 1).
    """

    design: Design  # the design analysed
    target_period_s: float  # s, the period the yield is counted against
    builds: int  # number of Monte Carlo builds
    seed: int  # seed of the generator
    temp_range_c: tuple[float, float]  # C, ambient range
    supply_range_v: tuple[float, float] | None  # V, supply range (None: nominal only)
    tolerances: tuple[PartTolerance, ...]  # per part, as used
    yield_band: float  # +/- fraction of the target period
    nominal: dict[str, float]  # the design's own figures at nominal everything
    quantiles: dict[str, tuple[float, float, float]]  # per figure: P5, P50, P95
    mc_range: dict[str, tuple[float, float]]  # per figure: min, max over the builds
    corners: dict[str, tuple[float, float]]  # per figure: min, max over the corners
    corner_count: int  # corner combinations evaluated
    corner_failures: int  # corners that stall, go dark or leave the supply range
    corner_stalls: int  # corners that stall (then the period has no upper bound)
    shares: dict[str, float]  # per source, share of the period variance (sums to 1 or 0)
    source_varies: dict[str, bool]  # per source, whether it has any spread here
    yield_fraction: float  # builds that run lit within +/- yield_band of the target
    stall_fraction: float  # builds that stall
    dark_fraction: float  # builds whose LED stays below its visible current
    unpowered_fraction: float  # builds with the supply outside the chip's range
    success: bool  # some builds oscillate
    message: str  # what went wrong, or ""
    samples: dict[str, np.ndarray] = field(default_factory=dict, repr=False)  # per build

    def width_pct(self, key: str = "period_s") -> float:
        """(P95 - P5) / P50 of ``key``, percent."""
        p5, p50, p95 = self.quantiles[key]
        return (p95 - p5) / p50 * 100.0 if p50 and math.isfinite(p50) else math.nan

    def as_dict(self) -> dict[str, Any]:
        """Plain data for JSON output (SI units, keys carry their unit)."""
        def pct_triple(key):
            return dict(zip(("p5", "p50", "p95"), self.quantiles[key], strict=True))

        return {
            "builds": self.builds,
            "seed": self.seed,
            "temp_range_c": list(self.temp_range_c),
            "supply_range_v": None if self.supply_range_v is None else list(self.supply_range_v),
            "chip_spread": self.design.chip.spread,
            "target_period_s": self.target_period_s,
            "yield_band": self.yield_band,
            "tolerances": [{"part": t.name.upper(), "tol_minus_pct": t.tol_minus_pct,
                            "tol_plus_pct": t.tol_plus_pct, "cap_kind": t.cap_kind,
                            "origin": t.origin} for t in self.tolerances],
            "quantiles": {k: pct_triple(k) for k in FIGURE_KEYS},
            "period_width_pct": self.width_pct("period_s"),
            "mc_range": {k: {"min": a, "max": b} for k, (a, b) in self.mc_range.items()},
            "corners": {k: {"min": a, "max": b} for k, (a, b) in self.corners.items()},
            "corner_count": self.corner_count,
            "corner_failures": self.corner_failures,
            "corner_stalls": self.corner_stalls,
            "variance_shares": dict(self.shares),
            "yield": self.yield_fraction,
            "stall_fraction": self.stall_fraction,
            "dark_fraction": self.dark_fraction,
            "unpowered_fraction": self.unpowered_fraction,
            "success": self.success,
            "message": self.message,
        }


def spread(design: Design, *, target_period_s: float | None = None,
           builds: int = DEFAULT_BUILDS, seed: int = 0,
           temp_range_c: tuple[float, float] = DEFAULT_TEMP_RANGE_C,
           supply_range_v: tuple[float, float] | None = None,
           resistor_tol_pct=None, cap_tol=None,
           yield_band: float = DEFAULT_YIELD_BAND,
           shares: bool = True, corners: bool = True,
           vary: Iterable[str] | None = None) -> SpreadResult:
    """Seeded Monte Carlo spread of ``design`` with worst-case corners alongside.

    Parameters
    ----------
    design : Design
        The circuit.
    target_period_s : float, optional
        Period (s) the yield is counted against; default the nominal period.
    builds : int
        Monte Carlo builds (default 2,000).
    seed : int
        Seed of numpy's default generator; the result carries it.
    temp_range_c : (float, float)
        Ambient range, C (default -20..50 C); one temperature per build.
    supply_range_v : (float, float), optional
        Supply range, V; each build takes one supply uniformly from it.
    resistor_tol_pct, cap_tol
        Tolerances, percent; see :func:`part_tolerances`.
    yield_band : float
        Builds within +/- this fraction of the target period count as good (0.10).
    shares, corners : bool
        Compute the variance shares (one run per source, on the first ``SHARE_BUILDS``
        builds) and the corners (both on by default; ``bands`` turns them off for its
        many cells).
    vary : iterable of str, optional
        The sources that vary (default all of ``SOURCES``); the others stay nominal
        (25 C, typical chip, nominal supply, exact part values).

    Returns
    -------
    SpreadResult
    """
    temp_range, supply_range = _checked_ranges(builds, seed, yield_band, temp_range_c,
                                               supply_range_v, target_period_s)
    tols = part_tolerances(design, resistor_tol_pct, cap_tol)
    fig, runs, cb, varies = _evaluate_builds(design, tols, builds, seed, temp_range,
                                             supply_range, _vary_set(vary), shares, corners)
    nominal, blocks, start = _split_blocks(fig, runs)
    allb = blocks["all"]
    target = float(target_period_s) if target_period_s is not None else nominal["period_s"]
    quantiles, mc_range = _quantiles_and_range(allb)
    share = _variance_shares(blocks)

    corner_rng: dict[str, tuple[float, float]] = {}
    n_corner, fails, n_stalls = 0, 0, 0
    if corners:
        n_corner = cb.size
        corner_rng, fails, n_stalls = _corner_figures(fig, slice(start, start + cb.size))

    st = allb["status"]
    n_osc = int(np.sum((st == RUNS) | (st == DARK)))
    success = n_osc > 0
    message = "" if success else "no build oscillates with the chip powered"
    # every figure per build for ordinary runs; past SAMPLES_ALL_UP_TO builds only what
    # the reports use (period and status), so a million builds stay in bounded memory
    kept = FIGURE_KEYS if builds <= SAMPLES_ALL_UP_TO else ("period_s",)
    samples = {k: allb[k] for k in (*kept, "status")}
    return SpreadResult(
        design=design, target_period_s=target, builds=builds, seed=seed,
        temp_range_c=temp_range, supply_range_v=supply_range, tolerances=tols,
        yield_band=float(yield_band), nominal=nominal, quantiles=quantiles,
        mc_range=mc_range, corners=corner_rng, corner_count=n_corner, corner_failures=fails,
        corner_stalls=n_stalls,
        shares=share if shares else {}, source_varies=varies,
        yield_fraction=_yield_fraction(allb, target, yield_band),
        stall_fraction=float(np.mean(st == STALLS)),
        dark_fraction=float(np.mean(st == DARK)),
        unpowered_fraction=float(np.mean(st == UNPOWERED)),
        success=success, message=message, samples=samples,
    )


def _checked_ranges(builds, seed, yield_band, temp_range_c, supply_range_v,
                    target_period_s) -> tuple[tuple[float, float], tuple[float, float] | None]:
    """Refuse bad run settings; the checked temperature (C) and supply (V) ranges."""
    if not (isinstance(builds, int) and 2 <= builds <= 1_000_000):
        raise RequestError(f"builds {builds!r}: accepted a whole number from 2 to 1,000,000")
    if not (isinstance(seed, int) and seed >= 0):
        raise RequestError(f"seed {seed!r}: accepted a whole number of 0 or more")
    if not (isinstance(yield_band, (int, float)) and 0 < yield_band < 1):
        raise RequestError(f"yield band {yield_band!r}: accepted a fraction between 0 and 1")
    temp_range = _check_range(temp_range_c, "temperature range", "C", positive=False)
    supply_range = (None if supply_range_v is None
                    else _check_range(supply_range_v, "supply range", "V", positive=True))
    if target_period_s is not None and not (math.isfinite(target_period_s)
                                            and target_period_s > 0):
        raise RequestError(f"target period {target_period_s!r}: accepted a time above 0 s")
    return temp_range, supply_range


def _evaluate_builds(design, tols, builds, seed, temp_range, supply_range, vary_set,
                     shares, corners):
    """Draw the builds and evaluate them with the nominal build and the corners.

    Returns the figures of every piece in order (nominal, the ``runs`` batches, then the
    corner batch), the named ``runs``, the corner batch (None without corners) and which
    sources vary.
    """
    names = [t.name for t in tols]
    draws = _draw(design, tols, builds, seed, temp_range, supply_range, vary_set)

    runs = [("all", _run_batch(design, draws, names, builds, None))]
    if shares:
        n_share = min(builds, SHARE_BUILDS)
        runs += [(s, _run_batch(design, draws, names, n_share, s))
                 for s in SOURCES if draws.varies[s]]
    varies = dict(draws.varies)
    del draws  # the batches hold what the engine needs; free the raw draws first
    nominal_batch = _Batch.nominal(design, 1, names)
    pieces = [nominal_batch] + [b for _, b in runs]
    cb = None
    if corners:
        cb = _corner_batch(design, tols, temp_range, supply_range, varies)
        pieces.append(cb)
    fig = _evaluate_chunked(design, pieces)  # in engine calls of bounded size
    return fig, runs, cb, varies


def _split_blocks(fig: Figures, runs) -> tuple[dict[str, float], dict[str, dict], int]:
    """The nominal figures, one block of figures per run, and where the corners start."""
    nominal = {k: float(v[0]) for k, v in _slice(fig, slice(0, 1)).items()}
    start = 1
    blocks = {}
    for name, b in runs:
        blocks[name] = _slice(fig, slice(start, start + b.size))
        start += b.size
    return nominal, blocks, start


def _quantiles_and_range(allb: dict[str, np.ndarray]):
    """Per figure, (P5, P50, P95) and (min, max) over the builds that oscillate."""
    quantiles, mc_range = {}, {}
    for k in FIGURE_KEYS:
        vals = _good(allb, k)
        if vals.size:
            quantiles[k] = tuple(float(x) for x in np.percentile(vals, QUANTILE_LEVELS))
            mc_range[k] = (float(vals.min()), float(vals.max()))
        else:
            quantiles[k] = (math.nan,) * 3
            mc_range[k] = (math.nan, math.nan)
    return quantiles, mc_range


def _variance_shares(blocks: dict[str, dict[str, np.ndarray]]) -> dict[str, float]:
    """Each source's share of the period variance (sums to 1, or all 0)."""
    variances = {}
    for s in SOURCES:
        if s in blocks:
            p = _good(blocks[s], "period_s")
            variances[s] = float(np.var(p)) if p.size > 1 else 0.0
        else:
            variances[s] = 0.0
    total = sum(variances.values())
    return {s: (variances[s] / total if total > 0 else 0.0) for s in SOURCES}


def _corner_figures(fig: Figures, sl: slice):
    """Per figure (min, max) over the corners in ``sl``, with failing and stalling counts."""
    corner_rng: dict[str, tuple[float, float]] = {}
    cblock = _slice(fig, sl)
    fails = int(np.sum(cblock["status"] != RUNS))
    n_stalls = int(np.sum(cblock["status"] == STALLS))
    stalls = n_stalls > 0
    for k in FIGURE_KEYS:
        vals = _good(cblock, k)
        lo, hi = ((float(vals.min()), float(vals.max())) if vals.size
                  else (math.nan, math.nan))
        if stalls and k != "led_peak_a":
            # a stalled corner: no bound on how long a period or flash lasts, nor on
            # what a near-stalled build averages
            hi = math.inf
        corner_rng[k] = (lo, hi)
    return corner_rng, fails, n_stalls


def _yield_fraction(allb: dict[str, np.ndarray], target: float, yield_band: float) -> float:
    """Share of the builds that run lit within +/- ``yield_band`` of ``target``."""
    st = allb["status"]
    period = allb["period_s"]
    with np.errstate(invalid="ignore"):
        good = (st == RUNS) & (np.abs(period / target - 1.0) <= yield_band)
    return float(np.mean(good))


# ----------------------------------------------------------------------- linearised
