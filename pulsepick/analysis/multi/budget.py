"""One budget: the lights' load curves added into one for the night model (see
:mod:`pulsepick.analysis.multi`)."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import RequestError


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
