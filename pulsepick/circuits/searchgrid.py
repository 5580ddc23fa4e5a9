"""What a stage module needs to lay out the solver's search over its values.

The solver asks each LED stage for a coarse grid of its values around a first estimate
(``Stage.search_grid``) and for the series neighbours of a promising point
(``Stage.refine``); the helpers and the shared estimates live here so that the stage
modules need nothing from the solver.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

#: Drop assumed across the reset or charge diode (or the residual on the flash
#: capacitor) when estimating a stage's resistor, V. Estimate (ref:bat54: a BAT54
#: drops 0.22-0.29 V at 0.1-1 mA); only centres the search.
STAGE_DROP_V = 0.3
#: Stage resistors run from this value up to --max-r, ohm (a few ohms: common practice).
STAGE_R_MIN_OHM = 1.0
#: The stage resistor search reaches at least up to this value, ohm (design choice:
#: the first estimate can come out near zero when the driver's resistance is guessed high).
STAGE_R_SPAN_MIN_OHM = 100.0
#: A stage resistor's coarse grid spans this factor either side of its first estimate
#: (design choice: the estimates assume a drop and a driver resistance).
STAGE_R_SPAN = 10.0
#: A stage capacitor's coarse grid spans this factor either side of its first estimate
#: (design choice: its estimate rests on a cruder model of the flash).
STAGE_C_SPAN = 30.0


@dataclass(frozen=True)
class StageSearch:
    """Search sizes of one stage: coarse points refined, timing networks crossed with the
    stage sets, and coarse grid values per decade (costly stages take fewer)."""

    coarse_keep: int
    timing_keep: int
    per_decade: int


@dataclass(frozen=True)
class SearchContext:
    """What the solver knows when it lays out a stage grid (SI units)."""

    led: Any  # LedModel
    supply_v: float  # V, design supply
    peak_a: float  # A, the peak LED current aimed at (already held under the LED's limit)
    rout_high_ohm: float  # ohm, the driver's output resistance driving high
    rout_low_ohm: float  # ohm, the same driving low
    r_values: np.ndarray  # ohm, stage resistor values allowed (sorted)
    c_values: np.ndarray  # F, stage capacitor values allowed (sorted)
    r_max_ohm: float  # ohm, largest resistor allowed
    flash_s: float  # s, flash length aimed at
    period_s: float  # s, period aimed at

    def series_resistor(self, drop_v: float = 0.0, rout_ohm: float | None = None) -> float:
        """First estimate of a series resistor that sets the aimed peak (ohm), kept
        between ``STAGE_R_MIN_OHM`` and the largest resistor allowed."""
        rout = self.rout_high_ohm if rout_ohm is None else rout_ohm
        est = (self.supply_v - float(self.led.voltage(self.peak_a)) - drop_v) / self.peak_a \
            - rout
        return min(max(est, STAGE_R_MIN_OHM), self.r_max_ohm)

    def series_grid(self, per_decade: int, drop_v: float = 0.0,
                    rout_ohm: float | None = None) -> tuple[float, np.ndarray]:
        """The first estimate of the series resistor (:meth:`series_resistor`, ohm) and
        the coarse grid around it: about ``per_decade`` allowed values per decade within
        ``STAGE_R_SPAN`` of it (up to ``STAGE_R_SPAN_MIN_OHM`` at least)."""
        est = self.series_resistor(drop_v, rout_ohm)
        return est, thin(around(self.r_values, est, STAGE_R_SPAN,
                                floor_hi=STAGE_R_SPAN_MIN_OHM), per_decade)

    def resistor_grid(self, estimate: float, per_decade: int) -> np.ndarray:
        """About ``per_decade`` allowed resistors per decade within ``STAGE_R_SPAN`` of
        ``estimate`` (ohm)."""
        return thin(around(self.r_values, estimate, STAGE_R_SPAN), per_decade)

    def capacitor_grid(self, estimate: float, per_decade: int) -> np.ndarray:
        """About ``per_decade`` allowed capacitors per decade within ``STAGE_C_SPAN`` of
        ``estimate`` (F)."""
        return thin(around(self.c_values, estimate, STAGE_C_SPAN), per_decade)


def crossed(first: str, firsts: np.ndarray, second: str,
            seconds: np.ndarray) -> dict[str, np.ndarray]:
    """A grid of every pair of values: ``first`` from ``firsts``, ``second`` from
    ``seconds`` (the second varying fastest)."""
    return {first: np.repeat(firsts, seconds.size), second: np.tile(seconds, firsts.size)}


def crossed_neighbours(point: dict[str, float], first: str, firsts: np.ndarray,
                       second: str, seconds: np.ndarray) -> list[dict[str, float]]:
    """``point`` and its neighbours: every pair of the series neighbours of its value
    ``first`` (in ``firsts``) and of its value ``second`` (in ``seconds``)."""
    near = neighbours(seconds, point[second]).tolist()
    return [{first: a, second: b} for a in neighbours(firsts, point[first]).tolist()
            for b in near]


def around(values: np.ndarray, centre: float, factor: float,
           floor_hi: float = 0.0) -> np.ndarray:
    """Values within ``factor`` of ``centre`` (by ratio, the upper end at least
    ``floor_hi``); the nearest few when none are.

    >>> around(np.array([1.0, 10.0, 100.0, 1000.0]), 50.0, 3.0).tolist()
    [100.0]
    """
    if values.size == 0:
        return values
    sel = values[(values >= centre / factor) & (values <= max(centre * factor, floor_hi))]
    if sel.size:
        return sel
    order = np.argsort(np.abs(np.log(values / centre)))
    return np.sort(values[order[:3]])


def thin(values: np.ndarray, per_decade: int) -> np.ndarray:
    """About ``per_decade`` values per decade, taken from ``values`` (sorted)."""
    if values.size <= 3:
        return values
    logs = np.log10(values)
    grid = np.arange(logs[0], logs[-1] + 1e-9, 1.0 / per_decade)
    idx = np.unique(np.clip(np.searchsorted(logs, grid), 0, values.size - 1))
    return values[idx]


def neighbours(values: np.ndarray, x: float) -> np.ndarray:
    """``x`` and the series values just below and above it.

    >>> neighbours(np.array([1.0, 2.2, 4.7, 10.0]), 4.7).tolist()
    [2.2, 4.7, 10.0]
    """
    if values.size == 0:
        return np.array([x])
    i = int(np.argmin(np.abs(np.log(values / x))))
    return values[max(i - 1, 0): i + 2]
