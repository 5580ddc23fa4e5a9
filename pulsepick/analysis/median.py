"""The median chip: switching levels at which a timing network gives the median build's period.

The solver evaluates thousands of networks with ONE chip; a maker gets a chip drawn
from the spread of :mod:`pulsepick.analysis.chipspread`. Because the phase times are
non-linear in the thresholds and the hysteresis window cuts the draw, the median
build's period is not the period of the typical chip (an HC gate at 3 V: about 6 %
longer). This module finds, for one core, a pair of levels (VT+, VT-) that gives the
median of the phase-weighted period over the chip spread, so the solver aims at the
build a maker most likely gets.

With a supply range the builds also take their supply uniformly from it (as
:func:`pulsepick.analysis.spread.spread` draws it), and a Schmitt gate's thresholds do
not follow the supply in proportion (an LVC gate's VT+/VT- ratio grows as the supply
falls), so the median build over the range blinks slower or faster than at the full
supply. The same draws then carry a supply each, and the pair at the full supply is
the one whose period is the median over chips and supplies: one evaluation at the
full supply stands for the whole range.

An RC phase charging from VT- to VT+ towards the supply lasts RC·ln((V - VT-)/(V - VT+))
and one discharging from VT+ to VT- towards ground RC·ln(VT+/VT-) (the closed form of
the Schmitt and 555 astables, ref:onsemi-mc14106b). A core's period is
``w_high·g_high + w_low·g_low`` with weights set by its resistors; the weights are the
aimed phase lengths (long and short phase of a steered core or a 555) or the typical
phase ratio (the plain Schmitt core, where one R sets both phases).
"""

from __future__ import annotations

import functools

import numpy as np

from pulsepick.analysis.chipspread import chip_shape, spread_fraction, threshold_limits

#: Quantiles per threshold in the grid that places the median: the chips of the spread
#: as a fixed set of equally likely points (each threshold's inverse CDF at the
#: midpoints of GRID_CHIPS equal steps, the pairs outside the hysteresis window left
#: out, as the draw rejects them). No sampling noise; 128 x 128 points place the median
#: to a few parts in ten thousand of the period.
GRID_CHIPS = 128
#: Supplies of a supply range in the grid (midpoints of equal steps: the uniform draw).
GRID_SUPPLIES = 16
#: Chips per threshold at each supply of a range (GRID_SUPPLIES x 48 x 48 points).
GRID_CHIPS_RANGED = 48
#: Grid points within this fraction of the median period are candidates for the pair.
MEDIAN_BAND = 0.001
#: Bisection steps for a chip without spread (a measured one) over a supply range: the
#: interval VT-..supply shrinks 2^-40, far below a millivolt.
_BISECT_STEPS = 40
_EPS_V = 1e-12  # V, slack on the hysteresis window (as the draw has)


def _phase_functions(vdd, vtp, vtm) -> tuple[np.ndarray, np.ndarray]:
    vdd = np.asarray(vdd, dtype=float)
    vtp = np.asarray(vtp, dtype=float)
    vtm = np.asarray(vtm, dtype=float)
    with np.errstate(all="ignore"):
        return np.log((vdd - vtm) / (vdd - vtp)), np.log(vtp / vtm)


def _scalar_limits(chip, supply_v: float) -> list[float]:
    return [float(np.asarray(x).reshape(-1)[0]) for x in threshold_limits(chip, supply_v)]


def chip_grid(chip, supplies, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(supply, VT+, VT-) in V of equally likely chips at each of ``supplies`` (V).

    ``n`` quantiles of each threshold's split normal (or the chip's ``spread`` shape,
    pulsepick.analysis.chipspread) crossed, the pairs outside the hysteresis window left out: a deterministic
    stand-in for the Monte Carlo draw of the same distribution.
    """
    u = (np.arange(n) + 0.5) / n
    supplies = np.asarray(supplies, dtype=float).reshape(-1)
    p_lo, p_typ, p_hi, m_lo, m_typ, m_hi, h_lo, h_hi = (
        np.broadcast_to(np.asarray(x, dtype=float).reshape(-1), supplies.shape)[:, None]
        for x in threshold_limits(chip, supplies))
    with np.errstate(invalid="ignore", divide="ignore"):
        fa = np.where(p_hi > p_lo, (p_typ - p_lo) / np.where(p_hi > p_lo, p_hi - p_lo, 1), 0)
        fb = np.where(m_hi > m_lo, (m_typ - m_lo) / np.where(m_hi > m_lo, m_hi - m_lo, 1), 0)
    # each threshold's n quantiles at each supply (supplies x n), then crossed
    shape = chip_shape(chip)
    vtp = (p_lo + spread_fraction(u[None, :], fa, shape) * (p_hi - p_lo))[:, :, None]
    vtm = (m_lo + spread_fraction(u[None, :], fb, shape) * (m_hi - m_lo))[:, None, :]
    h = vtp - vtm
    keep = (h >= h_lo[:, :, None] - _EPS_V) & (h <= h_hi[:, :, None] + _EPS_V)
    shape = h.shape
    return (np.broadcast_to(supplies[:, None, None], shape)[keep],
            np.broadcast_to(vtp, shape)[keep], np.broadcast_to(vtm, shape)[keep])


class _Weights:
    """The weighted period of a core relative to the typical chip's at the full supply."""

    def __init__(self, supply_v: float, p_typ: float, m_typ: float,
                 w_high: float | None, w_low: float | None) -> None:
        self.g_hi0, self.g_lo0 = (float(x) for x in _phase_functions(supply_v, p_typ, m_typ))
        if w_high is None or w_low is None:
            w_high, w_low = self.g_hi0, self.g_lo0
        self.w_high, self.w_low = w_high, w_low

    def rel(self, vdd, vtp, vtm) -> np.ndarray:
        g_hi, g_lo = _phase_functions(vdd, vtp, vtm)
        return ((self.w_high * g_hi / self.g_hi0 + self.w_low * g_lo / self.g_lo0)
                / (self.w_high + self.w_low))


def _median(rel: np.ndarray) -> float:
    rel = rel[np.isfinite(rel)]
    return float(np.median(rel)) if rel.size else float("nan")


def _range_median(chip, supply_v: float, supply_low_v: float, weights: _Weights) -> float:
    """Median relative period of builds with their supply uniform in the range.

    Each supply of the grid carries the chips of the split normal at that supply's
    limits (hysteresis kept), as the Monte Carlo spread draws them; supplies where the
    chip is not powered are left out, as the spread leaves those builds out of its
    quantiles.
    """
    from pulsepick.engine.environment import chip_model

    step = (supply_v - supply_low_v) / GRID_SUPPLIES
    vdd = supply_low_v + (np.arange(GRID_SUPPLIES) + 0.5) * step
    vdd = vdd[np.asarray(chip_model(chip).in_range(vdd), dtype=bool)]
    if vdd.size == 0:
        return float("nan")
    return _median(weights.rel(*chip_grid(chip, vdd, GRID_CHIPS_RANGED)))


def _solve_vt_plus(supply_v: float, vtm: float, weights: _Weights, target: float) -> float:
    """VT+ (V) at which the weighted period is ``target`` with VT- kept (bisection).

    Both phase functions grow with VT+, so the weighted period does too.
    """
    lo, hi = vtm * (1.0 + 1e-9), supply_v * (1.0 - 1e-9)
    for _ in range(_BISECT_STEPS):
        mid = 0.5 * (lo + hi)
        if float(weights.rel(supply_v, mid, vtm)) < target:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


@functools.lru_cache(maxsize=256)
def median_levels(chip, supply_v: float, w_high: float | None = None,
                  w_low: float | None = None,
                  supply_low_v: float | None = None) -> tuple[float, float]:
    """(VT+, VT-) in V whose period is the median over the chip spread.

    Parameters
    ----------
    chip : ChipSpec
        A chip with measured thresholds has no spread: its own levels are returned
        (over a supply range, VT+ is moved so that the period is the range's median).
    supply_v : float
        V, the full supply (where the levels apply).
    w_high, w_low : float or None
        Weights (any unit) of the charging and discharging phases in the period. None
        takes the typical chip's own phase ratio (plain Schmitt core).
    supply_low_v : float or None
        V, the low end of a supply range the builds are spread over (None: a steady
        supply). The levels then give the median over chips and supplies.

    Returns
    -------
    The chip of the grid whose weighted period is within ``MEDIAN_BAND`` of the median
    and nearest the typical levels (in units of the limits' width).
    """
    lim = _scalar_limits(chip, supply_v)
    p_lo, p_typ, p_hi, m_lo, m_typ, m_hi = lim[:6]
    weights = _Weights(supply_v, p_typ, m_typ, w_high, w_low)
    ranged = supply_low_v is not None and supply_low_v < supply_v
    target = _range_median(chip, supply_v, supply_low_v, weights) if ranged else float("nan")
    if getattr(chip, "measured", False) or (p_hi <= p_lo and m_hi <= m_lo):
        if not np.isfinite(target):
            return p_typ, m_typ
        return _solve_vt_plus(supply_v, m_typ, weights, target), m_typ
    _, vtp, vtm = chip_grid(chip, [supply_v], GRID_CHIPS)
    rel = weights.rel(supply_v, vtp, vtm)
    ok = np.isfinite(rel)
    med = target if np.isfinite(target) else _median(rel)
    near = ok & (np.abs(rel / med - 1.0) <= MEDIAN_BAND)
    if not np.any(near):
        near = ok & (np.abs(rel - med) == np.min(np.abs(rel[ok] - med)))
    wp, wm = max(p_hi - p_lo, 1e-12), max(m_hi - m_lo, 1e-12)
    dist = np.where(near, ((vtp - p_typ) / wp) ** 2 + ((vtm - m_typ) / wm) ** 2, np.inf)
    i = int(np.argmin(dist))
    return float(vtp[i]), float(vtm[i])


def median_shift(chip, supply_v: float, w_high: float | None = None,
                 w_low: float | None = None, supply_low_v: float | None = None) -> float:
    """The median chip's weighted period over the typical chip's, minus 1 (fraction)."""
    lim = _scalar_limits(chip, supply_v)
    weights = _Weights(supply_v, lim[1], lim[4], w_high, w_low)
    vtp, vtm = median_levels(chip, supply_v, w_high, w_low, supply_low_v)
    return float(weights.rel(supply_v, vtp, vtm)) - 1.0


def range_ratio(chip, supply_v: float, supply_low_v: float | None, w_high: float | None = None,
                w_low: float | None = None) -> float:
    """The period at the range-aware levels over the period at the full supply's own
    median levels (1 without a range): the factor the supply range adds to the aim."""
    if supply_low_v is None or not supply_low_v < supply_v:
        return 1.0
    return ((1.0 + median_shift(chip, supply_v, w_high, w_low, supply_low_v))
            / (1.0 + median_shift(chip, supply_v, w_high, w_low)))
