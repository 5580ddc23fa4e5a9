"""Worst-case corners: every source at its limits, as one batch."""

from __future__ import annotations

import itertools

import numpy as np

from pulsepick.design import Design
from pulsepick.engine.environment import chip_model
from pulsepick.parts.capacitor import get_cap_kind
from pulsepick.analysis.spread.builds import _Batch
from pulsepick.analysis.spread.chipdraws import (
    _chip_limits, _polygon_corner_points, _scalar_limits, _to_fraction, threshold_polygon,
)
from pulsepick.analysis.spread.tolerances import _SUPPLY_SAMPLES, RESISTOR_TEMPCO_PPM_PER_K, T_REF_C


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
        ends.append(sorted({min(lows), max(highs)}))  # one value where the part is exact
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
