"""The chip's thresholds in the spread: their limits, the hysteresis polygon, and the draws
of one package's levels.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pulsepick.analysis.chipspread import draw_fractions, spread_pdf
from pulsepick.design import Design
from pulsepick.engine.environment import chip_model
from pulsepick.errors import PartError
from pulsepick.analysis.spread.tolerances import _EDGE_SAMPLES, _EPS_V, _MOMENT_GRID


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
                # the edge's inner points: its ends are vertices, taken already
                t = np.linspace(0.0, 1.0, _EDGE_SAMPLES)[1:-1, None]
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
                              lim.h_lo, lim.h_hi, rng, shape=design.chip.spread)
    except PartError as err:
        raise PartError(f"{design.chip.family}: {err}") from err


def _chip_moments(lim: _ChipLimits, shape: str = "normal") -> tuple[np.ndarray, np.ndarray]:
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
        return x, spread_pdf(x, mode, shape)

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
