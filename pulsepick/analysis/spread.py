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
"""

from __future__ import annotations

import functools
import itertools
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from pulsepick.analysis.chipspread import draw_fractions, split_normal_pdf
from pulsepick.circuits.base import DARK, RUNS, STALLS, UNPOWERED, Figures, get_core, get_stage
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.engine.environment import chip_model, make_env
from pulsepick.errors import PartError, RequestError
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

@dataclass(frozen=True)
class _ChipLimits:
    """Threshold limits at a set of supplies (arrays), V."""

    p_lo: np.ndarray
    p_typ: np.ndarray
    p_hi: np.ndarray
    m_lo: np.ndarray
    m_typ: np.ndarray
    m_hi: np.ndarray
    h_lo: np.ndarray  # V, hysteresis minimum (-inf when unconstrained)
    h_hi: np.ndarray  # V, hysteresis maximum (+inf when unconstrained)


def _chip_limits(design: Design, vdd) -> _ChipLimits:
    v = np.asarray(vdd, dtype=float)
    model = chip_model(design.chip)
    if design.chip.is_timer:
        inf = np.full(v.shape, np.inf)
        return _ChipLimits(model.thr_ratio_min * v, model.thr_ratio_typ * v,
                           model.thr_ratio_max * v, model.trig_ratio_min * v,
                           model.trig_ratio_typ * v, model.trig_ratio_max * v, -inf, inf)
    th = model.thresholds(v)
    return _ChipLimits(th.vt_plus_min, th.vt_plus_typ, th.vt_plus_max, th.vt_minus_min,
                       th.vt_minus_typ, th.vt_minus_max, th.vh_min, th.vh_max)


def _scalar_limits(lim: _ChipLimits) -> tuple[float, ...]:
    return tuple(float(np.asarray(getattr(lim, f)).reshape(-1)[0])
                 for f in ("p_lo", "p_hi", "m_lo", "m_hi", "h_lo", "h_hi"))


def threshold_polygon(p_lo, p_hi, m_lo, m_hi, h_lo, h_hi) -> np.ndarray:
    """Vertices (VT+, VT-) of the box of threshold limits cut by the hysteresis window, V.

    The region ``p_lo <= VT+ <= p_hi``, ``m_lo <= VT- <= m_hi`` and
    ``h_lo <= VT+ - VT- <= h_hi`` (common practice), as a counter-clockwise
    polygon of shape (k, 2). Raises ``PartError`` when the limits leave no room.
    """
    poly = [(p_lo, m_lo), (p_hi, m_lo), (p_hi, m_hi), (p_lo, m_hi)]

    def clip(points, inside, cross):
        out = []
        for i, cur in enumerate(points):
            prev = points[i - 1]
            if inside(cur):
                if not inside(prev):
                    out.append(cross(prev, cur))
                out.append(cur)
            elif inside(prev):
                out.append(cross(prev, cur))
        return out

    def cut(points, h, keep_above):
        def inside(q):
            d = q[0] - q[1]
            return d >= h - _EPS_V if keep_above else d <= h + _EPS_V

        def cross(a, b):
            da, db = a[0] - a[1] - h, b[0] - b[1] - h
            t = da / (da - db) if da != db else 0.0
            return (a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]))

        return clip(points, inside, cross) if math.isfinite(h) else points

    poly = cut(poly, h_lo, True)
    poly = cut(poly, h_hi, False)
    if not poly:
        raise PartError(
            f"threshold limits VT+ {p_lo:g}..{p_hi:g} V, VT- {m_lo:g}..{m_hi:g} V leave no "
            f"room for a hysteresis of {h_lo:g}..{h_hi:g} V; the table row is inconsistent"
        )
    pts = np.array(poly, dtype=float)
    # drop repeated vertices of degenerate boxes (measured chips)
    keep = [0]
    for i in range(1, len(pts)):
        if np.max(np.abs(pts[i] - pts[keep[-1]])) > _EPS_V:
            keep.append(i)
    pts = pts[keep]
    if len(pts) > 1 and np.max(np.abs(pts[-1] - pts[0])) <= _EPS_V:
        pts = pts[:-1]
    return pts


def _polygon_corner_points(pts: np.ndarray, vdd: float, h_lo: float, h_hi: float,
                           schmitt: bool) -> np.ndarray:
    """The polygon's vertices plus points along its hysteresis-limited edges.

    Along an edge VT+ - VT- = h the period of a Schmitt core is smallest near
    VT+ = (VDD + h)/2 (from the period formula, ref:onsemi-mc14106b), inside the edge,
    so the edge is sampled and that point added.
    """
    out = [pts]
    k = len(pts)
    for i in range(k if k > 2 else k - 1):
        a, b = pts[i], pts[(i + 1) % k]
        for h in (h_lo, h_hi):
            if not math.isfinite(h):
                continue
            if abs(a[0] - a[1] - h) < 1e-9 and abs(b[0] - b[1] - h) < 1e-9:
                t = np.linspace(0.0, 1.0, _EDGE_SAMPLES)[:, None]
                out.append(a + t * (b - a))
                if schmitt:
                    p_star = 0.5 * (vdd + h)
                    lo, hi = sorted((a[0], b[0]))
                    if lo < p_star < hi:
                        out.append(np.array([[p_star, p_star - h]]))
    return np.concatenate(out)


def _to_fraction(v, lo, hi):
    width = hi - lo
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(width > 0, (v - lo) / np.where(width > 0, width, 1.0), 0.0)


# ----------------------------------------------------------------------- the batch

@dataclass
class _Batch:
    """Inputs of many builds (arrays of one length), for one engine call."""

    factors: dict[str, np.ndarray]  # multiplicative factor on each part value
    vdd: np.ndarray  # V
    chip_a: np.ndarray  # VT+ as a fraction of its limits at vdd; nan = typical
    chip_b: np.ndarray  # VT- likewise
    rout_u: np.ndarray  # output resistance, 0 = typical .. 1 = maximum

    @property
    def size(self) -> int:
        return int(self.vdd.size)

    @staticmethod
    def nominal(design: Design, n: int, names) -> _Batch:
        return _Batch({k: np.ones(n) for k in names}, np.full(n, design.supply_v),
                      np.full(n, np.nan), np.full(n, np.nan), np.zeros(n))

    @staticmethod
    def concat(batches: list[_Batch]) -> _Batch:
        names = batches[0].factors.keys()
        return _Batch({k: np.concatenate([b.factors[k] for b in batches]) for k in names},
                      np.concatenate([b.vdd for b in batches]),
                      np.concatenate([b.chip_a for b in batches]),
                      np.concatenate([b.chip_b for b in batches]),
                      np.concatenate([b.rout_u for b in batches]))


def _rout_range(design: Design, vdd) -> tuple[Any, Any, Any, Any]:
    """(high typ, high max, low typ, low max), ohm, at ``vdd``; None for a timer."""
    if design.chip.is_timer:
        return None  # type: ignore[return-value]
    model = chip_model(design.chip)
    return (model.rout_high(vdd, "typ"), model.rout_high(vdd, "max"),
            model.rout_low(vdd, "typ"), model.rout_low(vdd, "max"))


def _has_rout_spread(design: Design) -> bool:
    r = _rout_range(design, design.supply_v)
    return r is not None and bool(np.any(r[1] > r[0]) or np.any(r[3] > r[2]))


def _evaluate(design: Design, batch: _Batch) -> Figures:
    """The fast engine over every build of ``batch`` in one call."""
    vals = {k: (np.asarray(v, dtype=float) * batch.factors[k] if k in batch.factors else v)
            for k, v in design.values.items()}
    vdd = batch.vdd
    lim = _chip_limits(design, vdd)
    vtp = np.where(np.isnan(batch.chip_a), lim.p_typ,
                   lim.p_lo + np.nan_to_num(batch.chip_a) * (lim.p_hi - lim.p_lo))
    vtm = np.where(np.isnan(batch.chip_b), lim.m_typ,
                   lim.m_lo + np.nan_to_num(batch.chip_b) * (lim.m_hi - lim.m_lo))
    env, powered = make_env(design.chip, design.parts, vdd, c_timing=vals["c1"],
                            vt_plus=vtp, vt_minus=vtm)
    r = _rout_range(design, vdd)
    if r is not None:
        u = batch.rout_u
        env = replace(env, rout_high=r[0] + u * (r[1] - r[0]), rout_low=r[2] + u * (r[3] - r[2]))
    vals["c1"] = vals["c1"] * design.timing_cap_factor(env)
    return fast.evaluate(design.topo, vals, env, powered=powered)


#: Builds per fast-engine call: the engine's temporaries (quadrature nodes by builds)
#: stay some tens of MB whatever the number of builds (estimate; bench/bench_spread.py
#: measures the peak memory of 1,000,000 builds).
CHUNK_BUILDS = 50_000
#: Up to this many builds a spread keeps every figure of every build in ``samples``.
SAMPLES_ALL_UP_TO = 100_000


class _Joined:
    """Figures of several engine calls joined end to end (what :func:`_slice` reads)."""

    def __init__(self, parts: list[Figures], sizes: list[int]) -> None:
        for k in (*FIGURE_KEYS, "status"):
            setattr(self, k, np.concatenate([
                np.broadcast_to(np.asarray(getattr(f, k)).reshape(-1) if np.ndim(getattr(f, k))
                                else getattr(f, k), (n,))
                for f, n in zip(parts, sizes, strict=True)]))


def _evaluate_chunked(design: Design, pieces: list[_Batch]):
    """:func:`_evaluate` over the builds of ``pieces`` one after the other, in calls of
    at most ``CHUNK_BUILDS`` builds (no joined copy of the inputs is made)."""
    if sum(b.size for b in pieces) <= CHUNK_BUILDS:
        return _evaluate(design, _Batch.concat(pieces))
    parts, sizes = [], []
    for batch in pieces:
        n = batch.size
        for start in range(0, n, CHUNK_BUILDS):
            sl = slice(start, min(start + CHUNK_BUILDS, n))
            piece = _Batch({k: v[sl] for k, v in batch.factors.items()}, batch.vdd[sl],
                           batch.chip_a[sl], batch.chip_b[sl], batch.rout_u[sl])
            parts.append(_evaluate(design, piece))
            sizes.append(piece.size)
    return _Joined(parts, sizes)


# ----------------------------------------------------------------------- Monte Carlo draws

def _temperature_factors(design: Design, tols, temp_c, rng) -> dict[str, np.ndarray]:
    """Per-part factors at the builds' temperatures, with per-part tempco draws."""
    dt = temp_c - T_REF_C
    out = {}
    for t in tols:
        if t.kind == "R":
            a = rng.uniform(-RESISTOR_TEMPCO_PPM_PER_K, RESISTOR_TEMPCO_PPM_PER_K, dt.size)
            out[t.name] = 1.0 + a * 1e-6 * dt
        else:
            kind = get_cap_kind(t.cap_kind)
            if kind.temp_model == "linear":
                spread = kind.tempco_tol_ppm_per_k
                a = kind.tempco_ppm_per_k + rng.uniform(-spread, spread, dt.size)
                out[t.name] = 1.0 + a * 1e-6 * dt
            else:
                out[t.name] = kind.temperature_factor(temp_c, "typ")
    return out


def _modes(lim: _ChipLimits) -> tuple[np.ndarray, np.ndarray]:
    """Typical VT+ and VT- as fractions of their limits (the medians of the draw)."""
    return (_to_fraction(lim.p_typ, lim.p_lo, lim.p_hi),
            _to_fraction(lim.m_typ, lim.m_lo, lim.m_hi))


def _draw_chip(design: Design, vdd: np.ndarray, rng) -> tuple[np.ndarray, np.ndarray]:
    """VT+ and VT- as fractions of their limits at each build's supply.

    The split normal of :func:`pulsepick.analysis.chipspread.draw_fractions` (median at
    the typical value, limits at 0.1 % / 99.9 %) restricted to the hysteresis window.
    """
    lim = _chip_limits(design, vdd)
    try:
        return draw_fractions(lim.p_lo, lim.p_typ, lim.p_hi, lim.m_lo, lim.m_typ, lim.m_hi,
                              lim.h_lo, lim.h_hi, rng)
    except PartError as err:
        raise PartError(f"{design.chip.family}: {err}") from err


def _chip_moments(lim: _ChipLimits) -> tuple[np.ndarray, np.ndarray]:
    """Mean (2,) and covariance (2, 2) of the chip draw, as fractions, by quadrature.

    The density of :func:`_draw_chip` (split normal x split normal inside the hysteresis
    window) integrated with the midpoint rule on a 400 x 400 grid; a side with no
    spread is a single point.
    """
    p_lo, p_hi, m_lo, m_hi, h_lo, h_hi = _scalar_limits(lim)
    mode_a, mode_b = (float(np.asarray(x).reshape(-1)[0]) for x in _modes(lim))
    n = _MOMENT_GRID

    def axis(width, mode):
        if width <= 0:
            return np.zeros(1), np.ones(1)
        x = (np.arange(n) + 0.5) / n
        return x, split_normal_pdf(x, mode)

    xa, wa = axis(p_hi - p_lo, mode_a)
    xb, wb = axis(m_hi - m_lo, mode_b)
    A, B = np.meshgrid(xa, xb, indexing="ij")
    h = (p_lo + A * (p_hi - p_lo)) - (m_lo + B * (m_hi - m_lo))
    w = np.outer(wa, wb) * ((h >= h_lo - _EPS_V) & (h <= h_hi + _EPS_V))
    total = w.sum()
    if not total > 0:
        raise PartError("the hysteresis limits leave no room inside the threshold limits")
    w = w / total
    mean = np.array([(w * A).sum(), (w * B).sum()])
    da, db = A - mean[0], B - mean[1]
    cov = np.array([[(w * da * da).sum(), (w * da * db).sum()],
                    [(w * da * db).sum(), (w * db * db).sum()]])
    return mean, cov


@dataclass
class _Draws:
    r_tol: dict[str, np.ndarray]
    c_tol: dict[str, np.ndarray]
    temp: dict[str, np.ndarray]
    vdd: np.ndarray
    rout_u: np.ndarray
    chip_seed: Any  # SeedSequence for the chip draws (depend on the run's supplies)
    varies: dict[str, bool]


def _draw(design: Design, tols, n: int, seed: int, temp_range, supply_range,
          vary: frozenset[str]) -> _Draws:
    seqs = dict(zip(SOURCES, np.random.SeedSequence(seed).spawn(len(SOURCES)), strict=True))
    gens = {k: np.random.default_rng(s) for k, s in seqs.items()}
    r_tol, c_tol = {}, {}
    for t in tols:
        g = gens["resistors" if t.kind == "R" else "capacitors"]
        d = g.uniform(-t.tol_minus_pct, t.tol_plus_pct, n) * 0.01
        (r_tol if t.kind == "R" else c_tol)[t.name] = 1.0 + d
    temp_c = gens["temperature"].uniform(temp_range[0], temp_range[1], n)
    temp = _temperature_factors(design, tols, temp_c, gens["temperature"])
    if supply_range is None:
        vdd = np.full(n, design.supply_v)
    else:
        vdd = gens["supply"].uniform(supply_range[0], supply_range[1], n)
    rout_spread = _has_rout_spread(design)
    rout_u = gens["output_resistance"].random(n) if rout_spread else np.zeros(n)
    lim = _chip_limits(design, design.supply_v)
    p_lo, p_hi, m_lo, m_hi, _, _ = _scalar_limits(lim)
    varies = {
        "resistors": any(t.tol_minus_pct + t.tol_plus_pct > 0 for t in tols if t.kind == "R"),
        "capacitors": any(t.tol_minus_pct + t.tol_plus_pct > 0 for t in tols if t.kind == "C"),
        "temperature": any(np.ptp(f) > 0 for f in temp.values()),
        "chip_thresholds": bool(p_hi > p_lo or m_hi > m_lo),
        "output_resistance": rout_spread,
        "supply": supply_range is not None and supply_range[1] > supply_range[0],
    }
    varies = {k: v and k in vary for k, v in varies.items()}
    return _Draws(r_tol, c_tol, temp, vdd, rout_u, seqs["chip_thresholds"], varies)


def _run_batch(design: Design, draws: _Draws, names, n: int, only: str | None) -> _Batch:
    """The builds with every source varying (``only`` None) or just one."""
    b = _Batch.nominal(design, n, names)

    def use(source: str) -> bool:
        return draws.varies[source] and (only is None or source == only)

    for name in names:
        f = np.ones(n)
        if use("resistors") and name in draws.r_tol:
            f = f * draws.r_tol[name][:n]
        if use("capacitors") and name in draws.c_tol:
            f = f * draws.c_tol[name][:n]
        if use("temperature") and name in draws.temp:
            f = f * draws.temp[name][:n]
        b.factors[name] = f
    if use("supply"):
        b.vdd = draws.vdd[:n].copy()
    if use("output_resistance"):
        b.rout_u = draws.rout_u[:n].copy()
    if use("chip_thresholds"):
        b.chip_a, b.chip_b = _draw_chip(design, b.vdd, np.random.default_rng(draws.chip_seed))
    return b


# ----------------------------------------------------------------------- corners

def _corner_batch(design: Design, tols, temp_range, supply_range, varies: dict[str, bool]
                  ) -> _Batch:
    """Every extreme combination of the sources (bounded enumeration).

    Per part: the lowest and highest of tolerance end times temperature factor over
    the ends of the temperature range (class-2 and electrolytic kinds at their
    guaranteed band edges, linear kinds at the ends of their tempco spread, resistors
    at the tempco estimate). Chip: the vertices of the hysteresis-limited threshold region plus
    points along its hysteresis edges, at each corner supply. Output resistance:
    typical and maximum. Supply: the ends of the range, the threshold table's supplies
    inside it and a few evenly spaced points.
    """
    names = [t.name for t in tols]
    if not varies["supply"]:
        supplies = [design.supply_v]
    else:
        lo, hi = supply_range
        inner = []
        if not design.chip.is_timer:
            inner = [p.vdd_v for p in chip_model(design.chip).threshold_points
                     if lo < p.vdd_v < hi]
        supplies = sorted(set([lo, hi, *inner, *np.linspace(lo, hi, _SUPPLY_SAMPLES)]))
    temps = sorted(set(temp_range)) if varies["temperature"] else [T_REF_C]
    routs = [0.0, 1.0] if varies["output_resistance"] else [0.0]
    # each part's lowest and highest factor over the temperature range's ends: the
    # temperature enters the model only through the parts, so one box of part factors
    # holds every corner of every temperature (a little wider: each part at its own
    # worst temperature), and the chip and supply corners are enumerated once
    ends = []
    for t in tols:
        lo_t, hi_t = 1 - 0.01 * t.tol_minus_pct, 1 + 0.01 * t.tol_plus_pct
        if not varies["resistors" if t.kind == "R" else "capacitors"]:
            lo_t = hi_t = 1.0
        lows, highs = [], []
        for temp in temps:
            dt = temp - T_REF_C
            if not varies["temperature"]:
                lows.append(lo_t)
                highs.append(hi_t)
            elif t.kind == "R":
                tc = RESISTOR_TEMPCO_PPM_PER_K * 1e-6 * abs(dt)
                lows.append(lo_t * (1 - tc))
                highs.append(hi_t * (1 + tc))
            else:
                kind = get_cap_kind(t.cap_kind)
                lows.append(lo_t * float(kind.temperature_factor(temp, "min")))
                highs.append(hi_t * float(kind.temperature_factor(temp, "max")))
        ends.append((min(lows), max(highs)))
    combos = np.array(list(itertools.product(*ends)), dtype=float).reshape(-1, len(tols))
    batches = []
    for v in supplies:
        lim = _chip_limits(design, v)
        p_lo, p_hi, m_lo, m_hi, h_lo, h_hi = _scalar_limits(lim)
        poly = threshold_polygon(p_lo, p_hi, m_lo, m_hi, h_lo, h_hi)
        if varies["chip_thresholds"]:
            pts = _polygon_corner_points(poly, v, h_lo, h_hi, not design.chip.is_timer)
            ca = _to_fraction(pts[:, 0], p_lo, p_hi)
            cb = _to_fraction(pts[:, 1], m_lo, m_hi)
        else:  # typical thresholds
            pts = np.zeros((1, 2))
            ca = cb = np.full(1, np.nan)
        grid = list(itertools.product(range(len(combos)), range(len(pts)), routs))
        ic = np.array([g[0] for g in grid])
        ip = np.array([g[1] for g in grid])
        ru = np.array([g[2] for g in grid], dtype=float)
        m = len(grid)
        batches.append(_Batch({nm: combos[ic, j] for j, nm in enumerate(names)},
                              np.full(m, float(v)), ca[ip], cb[ip], ru))
    return _Batch.concat(batches)


# ----------------------------------------------------------------------- results

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
    tols = part_tolerances(design, resistor_tol_pct, cap_tol)
    names = [t.name for t in tols]
    vary_set = _vary_set(vary)
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
    if corners:
        cb = _corner_batch(design, tols, temp_range, supply_range, varies)
        pieces.append(cb)
    fig = _evaluate_chunked(design, pieces)  # in engine calls of bounded size

    nominal = {k: float(v[0]) for k, v in _slice(fig, slice(0, 1)).items()}
    start = 1
    blocks = {}
    for name, b in runs:
        blocks[name] = _slice(fig, slice(start, start + b.size))
        start += b.size
    allb = blocks["all"]
    target = float(target_period_s) if target_period_s is not None else nominal["period_s"]

    quantiles, mc_range = {}, {}
    for k in FIGURE_KEYS:
        vals = _good(allb, k)
        if vals.size:
            quantiles[k] = tuple(float(x) for x in np.percentile(vals, QUANTILE_LEVELS))
            mc_range[k] = (float(vals.min()), float(vals.max()))
        else:
            quantiles[k] = (math.nan,) * 3
            mc_range[k] = (math.nan, math.nan)

    variances = {}
    for s in SOURCES:
        if s in blocks:
            p = _good(blocks[s], "period_s")
            variances[s] = float(np.var(p)) if p.size > 1 else 0.0
        else:
            variances[s] = 0.0
    total = sum(variances.values())
    share = {s: (variances[s] / total if total > 0 else 0.0) for s in SOURCES}

    corner_rng: dict[str, tuple[float, float]] = {}
    n_corner, fails, n_stalls = 0, 0, 0
    if corners:
        cblock = _slice(fig, slice(start, start + cb.size))
        n_corner = cb.size
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

    st = allb["status"]
    period = allb["period_s"]
    with np.errstate(invalid="ignore"):
        good = (st == RUNS) & (np.abs(period / target - 1.0) <= yield_band)
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
        yield_fraction=float(np.mean(good)),
        stall_fraction=float(np.mean(st == STALLS)),
        dark_fraction=float(np.mean(st == DARK)),
        unpowered_fraction=float(np.mean(st == UNPOWERED)),
        success=success, message=message, samples=samples,
    )


# ----------------------------------------------------------------------- linearised

@dataclass(frozen=True, eq=False)
class LinearisedResult:
    """First-order propagation of the same inputs as :func:`spread` (SI units).

    ``centre[key]`` is the figure at the mean of every input; ``sigma[key]`` its
    standard deviation from the sensitivities and the inputs' standard deviations,
    combined in quadrature; ``p5``/``p95`` are centre -/+ 1.645 sigma (a normal
    approximation). ``shares`` is each source's share of the period variance.
    """

    design: Design
    temp_range_c: tuple[float, float]  # C
    supply_range_v: tuple[float, float] | None  # V
    tolerances: tuple[PartTolerance, ...]
    centre: dict[str, float]
    sigma: dict[str, float]
    sigma_by_source: dict[str, dict[str, float]]  # figure -> source -> sigma
    shares: dict[str, float]  # source -> share of the period variance

    def p5(self, key: str = "period_s") -> float:
        return self.centre[key] - Z95 * self.sigma[key]

    def p95(self, key: str = "period_s") -> float:
        return self.centre[key] + Z95 * self.sigma[key]


def linearised(design: Design, *, temp_range_c: tuple[float, float] = DEFAULT_TEMP_RANGE_C,
               supply_range_v: tuple[float, float] | None = None, resistor_tol_pct=None,
               cap_tol=None, vary: Iterable[str] | None = None,
               rel_step: float = 0.01) -> LinearisedResult:
    """Linearised (first-order) propagation of the spread inputs.

    Sensitivities are central finite differences of the fast engine at the mean of
    every input, with a step of ``rel_step`` times each input's standard deviation;
    all of them come from one vectorised engine call. Input standard deviations: a
    uniform interval of width w has w/sqrt(12); a tempco drawn within +/-a (ppm/K)
    contributes a/sqrt(3) * sqrt(E[(T - 25 C)^2]); the chip's thresholds take the mean and
    covariance of their draw (split normal x split normal inside the hysteresis window) by
    quadrature, at the mean supply. ``vary`` restricts the sources as in :func:`spread`.
    """
    vary_set = _vary_set(vary)
    temp_range = _check_range(temp_range_c, "temperature range", "C", positive=False)
    supply_range = (None if supply_range_v is None
                    else _check_range(supply_range_v, "supply range", "V", positive=True))
    tols = part_tolerances(design, resistor_tol_pct, cap_tol)
    t_lo, t_hi = temp_range
    t_mean, t_sd = 0.5 * (t_lo + t_hi), (t_hi - t_lo) / math.sqrt(12)
    dt_rms = math.sqrt(t_sd**2 + (t_mean - T_REF_C) ** 2)

    # variables: (label, source, mean, sd); the chip pair is handled by its covariance
    var: list[tuple[str, str, float, float]] = []
    for t in tols:
        lo, hi = -0.01 * t.tol_minus_pct, 0.01 * t.tol_plus_pct
        src = "resistors" if t.kind == "R" else "capacitors"
        var.append((f"tol:{t.name}", src, 0.5 * (lo + hi), (hi - lo) / math.sqrt(12)))
        if t.kind == "R":
            var.append((f"tc:{t.name}", "temperature", 0.0,
                        RESISTOR_TEMPCO_PPM_PER_K * 1e-6 / math.sqrt(3) * dt_rms))
        else:
            kind = get_cap_kind(t.cap_kind)
            if kind.temp_model == "linear":
                var.append((f"tc:{t.name}", "temperature", 0.0,
                            kind.tempco_tol_ppm_per_k * 1e-6 / math.sqrt(3) * dt_rms))
    var.append(("T", "temperature", t_mean, t_sd))
    if supply_range is None:
        v_mean, v_sd = design.supply_v, 0.0
    else:
        v_mean = 0.5 * sum(supply_range)
        v_sd = (supply_range[1] - supply_range[0]) / math.sqrt(12)
    var.append(("vdd", "supply", v_mean, v_sd))
    rout_sd = 1 / math.sqrt(12) if _has_rout_spread(design) else 0.0
    var.append(("rout", "output_resistance", 0.5 if rout_sd else 0.0, rout_sd))
    lim = _chip_limits(design, v_mean)
    p_lo, p_hi, m_lo, m_hi, _, _ = _scalar_limits(lim)
    widths = np.array([p_hi - p_lo, m_hi - m_lo])
    mean_ab, cov_ab = _chip_moments(lim)
    sd_ab = np.sqrt(np.clip(np.diag(cov_ab), 0.0, None))
    var.append(("chip_a", "chip_thresholds", float(mean_ab[0]), float(sd_ab[0])))
    var.append(("chip_b", "chip_thresholds", float(mean_ab[1]), float(sd_ab[1])))
    chip_on = "chip_thresholds" in vary_set and bool(widths.max() > 0)
    at_nominal = {"T": T_REF_C, "vdd": design.supply_v}
    var = [v if v[1] in vary_set else (v[0], v[1], at_nominal.get(v[0], 0.0), 0.0)
           for v in var]
    labels = [v[0] for v in var]
    mean = np.array([v[2] for v in var])
    sd = np.array([v[3] for v in var])

    # design matrix: the mean, then +/- step on each variable with spread
    active = [j for j in range(len(var)) if sd[j] > 0]
    rows = [mean]
    for j in active:
        for sign in (1.0, -1.0):
            x = mean.copy()
            x[j] += sign * rel_step * sd[j]
            rows.append(x)
    X = np.array(rows)
    col = {lab: X[:, i] for i, lab in enumerate(labels)}
    temp_c = col["T"]
    factors = {}
    for t in tols:
        f = 1.0 + col[f"tol:{t.name}"]
        if t.kind == "R":
            f = f * (1.0 + col[f"tc:{t.name}"])
        else:
            kind = get_cap_kind(t.cap_kind)
            tf = kind.temperature_factor(temp_c, "typ")
            if f"tc:{t.name}" in col:
                tf = tf + col[f"tc:{t.name}"]
            f = f * tf
        factors[t.name] = f
    batch = _Batch(factors, col["vdd"],
                   col["chip_a"] if chip_on else np.full(len(X), np.nan),
                   col["chip_b"] if chip_on else np.full(len(X), np.nan),
                   col["rout"])
    fig = _evaluate(design, batch)

    keys = ("period_s", "flash_s", "led_peak_a", "effective_a", "effective_mcd",
            "supply_avg_a")
    centre, sigma, by_source = {}, {}, {}
    shares: dict[str, float] = {}
    for key in keys:
        y = np.asarray(getattr(fig, key), dtype=float).reshape(-1)
        grad = np.zeros(len(var))
        for i, j in enumerate(active):
            grad[j] = (y[1 + 2 * i] - y[2 + 2 * i]) / (2 * rel_step * sd[j])
        contrib = {s: 0.0 for s in SOURCES}
        for j, (lab, src, _, s_j) in enumerate(var):
            if lab in ("chip_a", "chip_b"):
                continue
            contrib[src] += (grad[j] * s_j) ** 2
        g_ab = grad[[labels.index("chip_a"), labels.index("chip_b")]]
        contrib["chip_thresholds"] += float(g_ab @ cov_ab @ g_ab) if chip_on else 0.0
        total = sum(contrib.values())
        centre[key] = float(y[0])
        sigma[key] = math.sqrt(total) if math.isfinite(total) else math.nan
        by_source[key] = {s: math.sqrt(v) for s, v in contrib.items()}
        if key == "period_s":
            shares = {s: (v / total if total > 0 else 0.0) for s, v in contrib.items()}
    return LinearisedResult(design=design, temp_range_c=temp_range, supply_range_v=supply_range,
                            tolerances=tols, centre=centre, sigma=sigma,
                            sigma_by_source=by_source, shares=shares)


# ----------------------------------------------------------------------- tolerance bands

#: Resistor series compared by :func:`tolerance_bands` (tolerances from the series table:
#: E12 10 %, E24 5 %, E96 1 %, ref:e-series-tolerances).
BAND_SERIES = ("E12", "E24", "E96")
#: Timing-capacitor classes compared: (kind key, tolerance %). 20 % electrolytic
#: (common practice), 10 % X7R (K), 5 % film (J) and 2 % C0G (G): tolerance letters of
#: IEC 60062 (ref:cap-tolerance-letters); the pairing of kind and tolerance is common practice.
#: "film" takes the design's own film kind, or polyester when C1 is not film.
BAND_CAP_CLASSES = (("electrolytic", 20.0), ("x7r", 10.0), ("film", 5.0), ("c0g", 2.0))


@dataclass(frozen=True)
class BandCell:
    """The period spread with one resistor series and one timing-capacitor class."""

    resistor_series: str  # E-series name
    resistor_tol_pct: float  # %, its tolerance
    cap_class: str  # "electrolytic", "x7r", "film" or "c0g"
    cap_kind: str  # capacitor kind key used for C1
    cap_tol_pct: float  # %, C1 tolerance
    period_p5_s: float  # s
    period_p50_s: float  # s
    period_p95_s: float  # s
    width_pct: float  # %, (P95 - P5) / P50
    yield_fraction: float  # builds lit within the yield band of the target
    stall_fraction: float  # builds that stall
    cap_value_usual: bool  # C1's value is inside the usual range of that kind

    def as_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


@dataclass(frozen=True, eq=False)
class BandsResult:
    """Period spread over resistor series x timing-capacitor classes, for one design.

    ``current`` is the full spread (shares and corners) of the design as specified;
    ``ideal_parts`` the spread with exact resistors and capacitors (what the chip,
    temperature and supply leave).
    """

    design: Design
    builds: int
    seed: int
    target_period_s: float  # s
    yield_band: float
    temp_range_c: tuple[float, float]  # C
    supply_range_v: tuple[float, float] | None  # V
    cells: tuple[BandCell, ...]
    current: SpreadResult
    ideal_parts: SpreadResult

    def cell(self, series: str, cap_class: str) -> BandCell:
        for c in self.cells:
            if c.resistor_series == series and c.cap_class == cap_class:
                return c
        raise RequestError(f"no band cell for {series} with {cap_class}; accepted: "
                           f"{', '.join(BAND_SERIES)} with "
                           f"{', '.join(k for k, _ in BAND_CAP_CLASSES)}")

    def dominant_source(self) -> str:
        """The source with the largest share of the current design's period variance."""
        return max(self.current.shares, key=lambda s: self.current.shares[s])

    def as_dict(self) -> dict[str, Any]:
        return {
            "builds": self.builds,
            "seed": self.seed,
            "target_period_s": self.target_period_s,
            "yield_band": self.yield_band,
            "temp_range_c": list(self.temp_range_c),
            "supply_range_v": None if self.supply_range_v is None else list(self.supply_range_v),
            "cells": [c.as_dict() for c in self.cells],
            "current": self.current.as_dict(),
            "ideal_parts": {"period_width_pct": self.ideal_parts.width_pct(),
                            "yield": self.ideal_parts.yield_fraction,
                            "quantiles": self.ideal_parts.as_dict()["quantiles"]["period_s"]},
            "dominant_source": self.dominant_source(),
        }


def _film_kind(design: Design) -> str:
    own = design.parts.timing_cap
    return own if own.startswith("film") else "film-pet"


def tolerance_bands(design: Design, *, builds: int = DEFAULT_BUILDS, seed: int = 0,
                    target_period_s: float | None = None,
                    temp_range_c: tuple[float, float] = DEFAULT_TEMP_RANGE_C,
                    supply_range_v: tuple[float, float] | None = None,
                    yield_band: float = DEFAULT_YIELD_BAND) -> BandsResult:
    """The period spread of ``design`` for every resistor series x timing-capacitor class.

    Each cell keeps the design's nominal values and changes only the resistors'
    tolerance (all resistors) and the timing capacitor C1's kind and tolerance (other
    capacitors keep theirs). Every cell uses the same seed, so the cells differ by the
    parts, not by sampling noise.
    """
    common = {"builds": builds, "seed": seed, "temp_range_c": temp_range_c,
              "supply_range_v": supply_range_v, "yield_band": yield_band}
    current = spread(design, target_period_s=target_period_s, **common)
    target = current.target_period_s
    ideal = spread(design, target_period_s=target, shares=False, corners=False,
                   vary=[s for s in SOURCES if s not in ("resistors", "capacitors")], **common)
    c1 = float(design.values["c1"])
    cells = []
    for cls, cap_pct in BAND_CAP_CLASSES:
        kind_key = _film_kind(design) if cls == "film" else cls
        kind = get_cap_kind(kind_key)
        variant = replace(design, parts=replace(design.parts, timing_cap=kind_key))
        for series in BAND_SERIES:
            r_pct = get_series(series).tolerance_pct
            res = spread(variant, target_period_s=target, resistor_tol_pct=r_pct,
                         cap_tol={"c1": cap_pct}, shares=False, corners=False, **common)
            p5, p50, p95 = res.quantiles["period_s"]
            cells.append(BandCell(
                resistor_series=series, resistor_tol_pct=r_pct, cap_class=cls,
                cap_kind=kind_key, cap_tol_pct=cap_pct, period_p5_s=p5, period_p50_s=p50,
                period_p95_s=p95, width_pct=res.width_pct(), yield_fraction=res.yield_fraction,
                stall_fraction=res.stall_fraction,
                cap_value_usual=bool(kind.c_min_f <= c1 <= kind.c_max_f),
            ))
    return BandsResult(design=design, builds=builds, seed=seed, target_period_s=target,
                       yield_band=float(yield_band), temp_range_c=current.temp_range_c,
                       supply_range_v=current.supply_range_v, cells=tuple(cells),
                       current=current, ideal_parts=ideal)
