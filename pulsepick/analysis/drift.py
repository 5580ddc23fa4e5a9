"""Supply-droop drift: a design's figures as its supercapacitor runs down through the night.

On an unregulated store the supply falls from full at dusk to the end-of-night voltage,
and with it the Schmitt thresholds, the gate's drive and the LED's current change
(common practice). :func:`drift` evaluates the design at every supply step in ONE
vectorised fast-engine call, and finds exactly (by repeated subdivision of the
bracketing step) the supply below which the LED goes dark and the one below which the
chip leaves its supply range.

References
----------
.. [1] Schmitt oscillator period against the thresholds at each supply: onsemi MC14106B
   astable figure (ref:onsemi-mc14106b) with the threshold tables (ref:nxp-74hc1g14, ref:onsemi-mc74hc14a, ref:onsemi-mc74vhc1g14 to ref:fairchild-cd40106bc).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from pulsepick.circuits.base import DARK, RUNS, STATUS_WORDS
from pulsepick.design import Design
from pulsepick.errors import RequestError

#: Default supply step, V: a table every 0.1 V from full to end of night (common practice).
DEFAULT_STEP_V = 0.1
#: Each refinement pass evaluates this many points across the bracketing interval.
_REFINE_POINTS = 64
#: Refine until the bracket is narrower than this, V.
_REFINE_TOL_V = 1e-9
_MAX_POINTS = 100_000


def supply_grid(v_full: float, v_end: float, steps=None) -> np.ndarray:
    """Supplies from ``v_full`` down to ``v_end``, V, falling.

    ``steps`` None: every 0.1 V from full, with ``v_end`` added as the last point; an
    int n >= 2: n evenly spaced supplies including both ends; a sequence: those supplies
    (sorted falling, each inside the range).
    """
    if steps is None:
        n = math.floor((v_full - v_end) / DEFAULT_STEP_V + 1e-9)
        grid = [round(v_full - k * DEFAULT_STEP_V, 12) for k in range(n + 1)]
        if grid[-1] - v_end > 1e-9:
            grid.append(v_end)
        return np.array(grid, dtype=float)
    if isinstance(steps, (int, np.integer)) and not isinstance(steps, bool):
        if not 2 <= steps <= _MAX_POINTS:
            raise RequestError(f"drift steps {steps}: accepted a number of supplies from 2 to "
                               f"{_MAX_POINTS:,}, or a list of supplies")
        return np.linspace(v_full, v_end, int(steps))
    if isinstance(steps, (Sequence, np.ndarray)) and not isinstance(steps, str):
        try:
            grid = np.sort(np.asarray(steps, dtype=float))[::-1]
        except (TypeError, ValueError) as err:
            raise RequestError(f"drift supplies {steps!r}: accepted numbers in V") from err
        if grid.size < 2 or not np.all(np.isfinite(grid)) or grid[0] > v_full + 1e-12 \
                or grid[-1] < v_end - 1e-12:
            raise RequestError(f"drift supplies must be at least two values from {v_end:g} V to "
                               f"{v_full:g} V")
        return grid
    raise RequestError(f"drift steps {steps!r}: accepted None (every 0.1 V), a number of "
                       "supplies, or a list of supplies in V")


@dataclass(frozen=True, eq=False)
class DriftResult:
    """A design's figures from full supply down to the end of the night (SI units).

    Arrays run from ``v_full`` down to ``v_end`` (one element per supply).
    ``dark_below_v`` is the supply below which the LED stays under its visible current
    (or the oscillator stalls), found to 1 nV; None when it stays lit over the whole
    range or is dark already at full supply (``lit_at_full``). ``unpowered_below_v`` is
    where the supply falls out of the chip's range; None when it never does.
    """

    design: Design  # the design
    v_full: float  # V, supply at dusk
    v_end: float  # V, supply at the end of the night
    supply_v: np.ndarray  # V, falling
    period_s: np.ndarray  # s (inf where the oscillator stalls)
    flash_s: np.ndarray  # s
    led_peak_a: np.ndarray  # A
    effective_a: np.ndarray  # A, steady current that looks as bright
    effective_mcd: np.ndarray  # mcd (nan when the LED's intensity is unknown)
    supply_avg_a: np.ndarray  # A, average supply current
    status: np.ndarray  # int codes (see STATUS_WORDS)
    period_change_pct: float  # %, period at the lowest running supply vs full supply
    period_change_to_v: float  # V, the supply that change is taken at
    lit_at_full: bool  # the LED is visible at full supply
    dark_below_v: float | None  # V
    unpowered_below_v: float | None  # V
    success: bool  # the design oscillates at full supply
    message: str
    notes: tuple[str, ...] = field(default=())

    def rows(self) -> list[dict[str, Any]]:
        """One plain dict per supply, for tables and JSON."""
        out = []
        for i, v in enumerate(self.supply_v):
            out.append({
                "supply_v": float(v),
                "period_s": float(self.period_s[i]),
                "flash_s": float(self.flash_s[i]),
                "led_peak_a": float(self.led_peak_a[i]),
                "effective_a": float(self.effective_a[i]),
                "effective_mcd": float(self.effective_mcd[i]),
                "supply_avg_a": float(self.supply_avg_a[i]),
                "status": STATUS_WORDS[int(self.status[i])],
            })
        return out

    def as_dict(self) -> dict[str, Any]:
        """Plain data for JSON output."""
        return {
            "v_full_v": self.v_full,
            "v_end_v": self.v_end,
            "steps": self.rows(),
            "period_change_pct": self.period_change_pct,
            "period_change_to_v": self.period_change_to_v,
            "lit_at_full": self.lit_at_full,
            "dark_below_v": self.dark_below_v,
            "unpowered_below_v": self.unpowered_below_v,
            "success": self.success,
            "message": self.message,
            "notes": list(self.notes),
        }


def _flat(x, n: int) -> np.ndarray:
    return np.broadcast_to(np.asarray(x, dtype=float), (n,)).copy()


def _chip_kw(design: Design, v, levels) -> dict:
    """Keyword arguments of ``design.fast`` at supplies ``v`` for the chip whose levels
    at the design supply are ``levels`` (V; None: the typical chip)."""
    if levels is None:
        return {}
    from pulsepick.analysis.chipspread import same_chip_levels

    vtp, vtm = same_chip_levels(design.chip, design.supply_v, levels[0], levels[1], v)
    return {"vt_plus": vtp, "vt_minus": vtm}


def _lit(design: Design, v, levels=None) -> np.ndarray:
    """True where the oscillator runs and the LED peak reaches its visible current.

    The chip's supply range is not part of this (that is ``_powered``).
    """
    v = np.asarray(v, dtype=float)
    f = design.fast(v, **_chip_kw(design, v, levels))
    peak = _flat(f.led_peak_a, np.size(v))
    period = _flat(f.period_s, np.size(v))
    return np.isfinite(period) & (peak >= design.parts.led.visible_a)


def _powered(design: Design, v) -> np.ndarray:
    _, powered = design.env(np.asarray(v, dtype=float))
    return np.broadcast_to(np.asarray(powered, dtype=bool), (np.size(v),)).copy()


def _boundary(test, hi: float, lo: float) -> float:
    """The supply between ``lo`` and ``hi`` where ``test`` turns from True (at hi) to False.

    Repeated subdivision: each pass evaluates the bracket at ``_REFINE_POINTS`` points
    in one call and keeps the sub-interval holding the highest change.
    """
    while hi - lo > _REFINE_TOL_V:
        v = np.linspace(hi, lo, _REFINE_POINTS)
        ok = test(v)
        bad = np.flatnonzero(~ok)
        if bad.size == 0:  # no change inside after all (numerical edge): the low end
            return lo
        j = int(bad[0])
        if j == 0:
            return hi
        hi, lo = float(v[j - 1]), float(v[j])
    return 0.5 * (hi + lo)


def drift(design: Design, v_full: float, v_end: float, steps=None,
          levels: tuple[float, float] | None = None) -> DriftResult:
    """Figures of ``design`` at every supply from ``v_full`` down to ``v_end``.

    Parameters
    ----------
    design : Design
    v_full : float
        Supply at the start of the night, V.
    v_end : float
        Supply at the end of the night, V (below ``v_full``).
    steps : None, int or sequence of float
        None: every 0.1 V (common practice); see :func:`supply_grid`.
    levels : (float, float), optional
        VT+ and VT- in V of the chip at the design supply (the median chip a search
        aimed at), followed to every supply by
        :func:`pulsepick.analysis.chipspread.same_chip_levels`; None: the typical chip.

    Returns
    -------
    DriftResult
    """
    for name, value in (("v_full", v_full), ("v_end", v_end)):
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise RequestError(f"drift {name} {value!r}: accepted a supply above 0 V")
    if not v_full > v_end:
        raise RequestError(f"drift from {v_full:g} V to {v_end:g} V: the full supply must be "
                           "above the end-of-night supply")
    v = supply_grid(float(v_full), float(v_end), steps)
    n = v.size
    f = design.fast(v, **_chip_kw(design, v, levels))  # one vectorised call over every step
    status = np.broadcast_to(np.asarray(f.status), (n,)).astype(int)
    period = _flat(f.period_s, n)
    arrays = {k: _flat(getattr(f, k), n) for k in
              ("flash_s", "led_peak_a", "effective_a", "effective_mcd", "supply_avg_a")}

    lit = np.isfinite(period) & (arrays["led_peak_a"] >= design.parts.led.visible_a)
    powered = _powered(design, v)
    notes = []
    dark_below = None
    if lit[0]:
        off = np.flatnonzero(~lit)
        if off.size:
            j = int(off[0])
            dark_below = _boundary(lambda x: _lit(design, x, levels), float(v[j - 1]), float(v[j]))
    unpowered_below = None
    if powered[0]:
        off = np.flatnonzero(~powered)
        if off.size:
            j = int(off[0])
            unpowered_below = _boundary(lambda x: _powered(design, x), float(v[j - 1]),
                                        float(v[j]))
    else:
        notes.append(f"the supply {v[0]:g} V is already outside the chip's range")

    running = ((status == RUNS) | (status == DARK)) & np.isfinite(period)
    success = bool(running[0])
    if success:
        last = int(np.flatnonzero(running)[-1])
        # the last step of the first unbroken run from full supply
        breaks = np.flatnonzero(~running)
        if breaks.size:
            last = int(breaks[0]) - 1
        change = (period[last] / period[0] - 1.0) * 100.0
        change_at = float(v[last])
        message = ""
    else:
        change, change_at = math.nan, math.nan
        message = f"the design does not oscillate at {v[0]:g} V ({STATUS_WORDS[int(status[0])]})"
    return DriftResult(
        design=design, v_full=float(v_full), v_end=float(v_end), supply_v=v,
        period_s=period, status=status, period_change_pct=float(change),
        period_change_to_v=change_at, lit_at_full=bool(lit[0]), dark_below_v=dark_below,
        unpowered_below_v=unpowered_below, success=success, message=message,
        notes=tuple(notes), **arrays,
    )
