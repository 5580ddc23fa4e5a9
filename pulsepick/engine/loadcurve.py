"""A circuit seen from its storage: figures against supply voltage.

The circuit engines evaluate a circuit over a grid of supply voltages and hand
the night simulation a :class:`LoadCurve`; the night only needs the average
supply current, whether the light is on, and the blink figures to report.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pulsepick.errors import CircuitError

_FIGURES = ("supply_avg_a", "period_s", "flash_s", "led_peak_a", "effective_a", "effective_cd")


@dataclass(frozen=True, eq=False)
class LoadCurve:
    """Figures of one circuit at each supply voltage of an ascending grid.

    ``lit`` is True where the circuit runs, the chip is within its supply range
    and the LED reaches visible current. Values between grid points are
    interpolated linearly.
    """

    label: str  # e.g. "schmitt + pulse, hc, red LED"
    supply_v: np.ndarray  # V, ascending
    supply_avg_a: np.ndarray  # A, average supply current of the whole circuit
    period_s: np.ndarray  # s, nan where it does not run
    flash_s: np.ndarray  # s, nan where it does not run
    led_peak_a: np.ndarray  # A, nan where unknown
    effective_a: np.ndarray  # A, effective (Blondel-Rey weighted) LED current
    effective_cd: np.ndarray  # cd, nan where the LED intensity is unknown
    lit: np.ndarray  # bool
    notes: tuple[str, ...] = ()  # assumptions of the engine that made it

    def __post_init__(self) -> None:
        supply = np.asarray(self.supply_v, dtype=float)
        problems = []
        if supply.ndim != 1 or supply.size < 2:
            problems.append("supply_v needs at least 2 voltages in a 1-D array")
        elif not (np.all(np.isfinite(supply)) and np.all(np.diff(supply) > 0)):
            problems.append("supply_v must be finite and strictly ascending")
        arrays = {"supply_v": supply}
        for name in _FIGURES:
            arr = np.asarray(getattr(self, name), dtype=float)
            if arr.shape != supply.shape:
                problems.append(f"{name} has shape {arr.shape}, supply_v has {supply.shape}")
            arrays[name] = arr
        lit = np.asarray(self.lit, dtype=bool)
        if lit.shape != supply.shape:
            problems.append(f"lit has shape {lit.shape}, supply_v has {supply.shape}")
        current = arrays["supply_avg_a"]
        if current.shape == supply.shape and not (
            np.all(np.isfinite(current)) and np.all(current >= 0)
        ):
            problems.append("supply_avg_a must be finite and 0 or more at every supply")
        if problems:
            raise CircuitError(f"load curve {self.label!r} is malformed: " + "; ".join(problems))
        for name, arr in arrays.items():
            arr = arr.copy()
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)
        lit = lit.copy()
        lit.setflags(write=False)
        object.__setattr__(self, "lit", lit)

    def current_a(self, v):
        """Average supply current, A, at supply ``v`` (V); vectorised, clamped to the grid."""
        return np.interp(v, self.supply_v, self.supply_avg_a)

    def at(self, v: float) -> dict[str, float | bool]:
        """Every figure at supply ``v`` (V), linear between grid points.

        Outside the grid the end values are used. ``lit`` is True when ``v`` is at
        or above the stop voltage (:meth:`light_stops_below_v`) and within the grid.
        """
        out: dict[str, float | bool] = {"supply_v": float(v)}
        for name in _FIGURES:
            out[name] = float(np.interp(v, self.supply_v, getattr(self, name)))
        stop = self.light_stops_below_v()
        in_grid = self.supply_v[0] <= v <= self.supply_v[-1]
        out["lit"] = bool(in_grid and (math.isnan(stop) or v >= stop))
        return out

    def lit_band_v(self) -> tuple[float, float] | None:
        """The highest band of grid supplies where the circuit is lit, (low, high) in V.

        ``None`` when it is lit nowhere on the grid. Above ``high`` the circuit is dark
        (e.g. over the chip family's supply range) when ``high`` is not the grid's top.
        """
        lit = np.asarray(self.lit, dtype=bool)
        if not bool(np.any(lit)):
            return None
        top = int(np.flatnonzero(lit)[-1])
        dark_below = np.flatnonzero(~lit[:top])
        low = 0 if dark_below.size == 0 else int(dark_below[-1]) + 1
        return float(self.supply_v[low]), float(self.supply_v[top])

    def light_stops_below_v(self) -> float:
        """The stop voltage, V: the lowest grid supply above which everything is lit.

        ``nan`` when the circuit is lit over the whole grid, ``inf`` when it is not
        lit even at the top of the grid. The answer is resolved to the grid step
        (the first lit grid point, never an unlit one).
        """
        lit = self.lit
        if bool(np.all(lit)):
            return math.nan
        if not bool(lit[-1]):
            return math.inf
        last_dark = int(np.flatnonzero(~lit)[-1])
        return float(self.supply_v[last_dark + 1])


def constant_load(
    current_a: float,
    *,
    period_s: float = math.nan,
    flash_s: float = math.nan,
    label: str | None = None,
    supply_v: tuple[float, float] = (0.0, 100.0),
) -> LoadCurve:
    """A plain current sink of ``current_a`` (A), lit at every supply.

    With ``period_s`` (s) it also stands for a blinker of fixed period, so flash
    counts can be checked against runtime / period.
    """
    if not (math.isfinite(current_a) and current_a >= 0):
        raise CircuitError(f"constant load {current_a!r} A is impossible; give 0 A or more")
    grid = np.asarray(supply_v, dtype=float)
    ones = np.ones_like(grid)
    return LoadCurve(
        label=label or f"constant {current_a:g} A",
        supply_v=grid,
        supply_avg_a=current_a * ones,
        period_s=period_s * ones,
        flash_s=flash_s * ones,
        led_peak_a=math.nan * ones,
        effective_a=math.nan * ones,
        effective_cd=math.nan * ones,
        lit=np.ones(grid.shape, dtype=bool),
        notes=("a constant current sink, the same at every supply",),
    )
