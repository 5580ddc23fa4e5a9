"""The median chip: switching levels at which a timing network gives the median build's period.

The solver evaluates thousands of networks with ONE chip; a maker gets a chip drawn
from the spread of :mod:`pulsepick.analysis.chipspread`. Because the phase times are
non-linear in the thresholds and the hysteresis window cuts the draw, the median
build's period is not the period of the typical chip (an HC gate at 3 V: about 6 %
longer). This module finds, for one core, a pair of levels (VT+, VT-) that gives the
median of the phase-weighted period over the chip spread, so the solver aims at the
build a maker most likely gets.

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

from pulsepick.analysis.chipspread import draw_thresholds, threshold_limits

#: Chips drawn to place the median (the median of 4,000 draws is within about 1/60 of
#: the spread's standard deviation, sqrt(pi/2/4000)).
MEDIAN_DRAWS = 4000
#: Draws within this fraction of the median period are candidates for the pair.
MEDIAN_BAND = 0.001


def _phase_functions(vdd: float, vtp, vtm) -> tuple[np.ndarray, np.ndarray]:
    vtp = np.asarray(vtp, dtype=float)
    vtm = np.asarray(vtm, dtype=float)
    with np.errstate(all="ignore"):
        return np.log((vdd - vtm) / (vdd - vtp)), np.log(vtp / vtm)


@functools.lru_cache(maxsize=256)
def median_levels(chip, supply_v: float, w_high: float | None = None,
                  w_low: float | None = None, seed: int = 0) -> tuple[float, float]:
    """(VT+, VT-) in V whose period is the median over the chip spread.

    Parameters
    ----------
    chip : ChipSpec
        A chip with measured thresholds has no spread: its own levels are returned.
    supply_v : float
        V.
    w_high, w_low : float or None
        Weights (any unit) of the charging and discharging phases in the period. None
        takes the typical chip's own phase ratio (plain Schmitt core).
    seed : int
        Seed of the draws (the result is reproducible).

    Returns
    -------
    The drawn chip whose weighted period is within ``MEDIAN_BAND`` of the median and
    nearest the typical levels (in units of the limits' width).
    """
    lim = [float(np.asarray(x).reshape(-1)[0]) for x in threshold_limits(chip, supply_v)]
    p_lo, p_typ, p_hi, m_lo, m_typ, m_hi = lim[:6]
    if getattr(chip, "measured", False) or (p_hi <= p_lo and m_hi <= m_lo):
        return p_typ, m_typ
    g_hi0, g_lo0 = (float(x) for x in _phase_functions(supply_v, p_typ, m_typ))
    if w_high is None or w_low is None:
        w_high, w_low = g_hi0, g_lo0
    total = w_high + w_low
    vtp, vtm = draw_thresholds(chip, supply_v, MEDIAN_DRAWS, np.random.default_rng(seed))
    g_hi, g_lo = _phase_functions(supply_v, vtp, vtm)
    rel = (w_high * g_hi / g_hi0 + w_low * g_lo / g_lo0) / total
    ok = np.isfinite(rel)
    med = float(np.median(rel[ok]))
    near = ok & (np.abs(rel / med - 1.0) <= MEDIAN_BAND)
    if not np.any(near):
        near = ok & (np.abs(rel - med) == np.min(np.abs(rel[ok] - med)))
    wp, wm = max(p_hi - p_lo, 1e-12), max(m_hi - m_lo, 1e-12)
    dist = np.where(near, ((vtp - p_typ) / wp) ** 2 + ((vtm - m_typ) / wm) ** 2, np.inf)
    i = int(np.argmin(dist))
    return float(vtp[i]), float(vtm[i])


def median_shift(chip, supply_v: float, w_high: float | None = None,
                 w_low: float | None = None, seed: int = 0) -> float:
    """The median chip's weighted period over the typical chip's, minus 1 (fraction)."""
    lim = [float(np.asarray(x).reshape(-1)[0]) for x in threshold_limits(chip, supply_v)]
    vtp, vtm = median_levels(chip, supply_v, w_high, w_low, seed)
    g_hi0, g_lo0 = (float(x) for x in _phase_functions(supply_v, lim[1], lim[4]))
    g_hi, g_lo = (float(x) for x in _phase_functions(supply_v, vtp, vtm))
    if w_high is None or w_low is None:
        w_high, w_low = g_hi0, g_lo0
    return (w_high * g_hi / g_hi0 + w_low * g_lo / g_lo0) / (w_high + w_low) - 1.0
