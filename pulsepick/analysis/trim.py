"""Trimmers in the design: a fixed resistor plus a trimmer on the part that sets the period.

The trimmer goes on the resistor that sets most of the period: R1 for Schmitt cores;
for a 555 RA when RA > 2·RB, else RB (t = ln2·(RA + 2·RB)·C, ref:maplin-555-notes).
It is sized so that every build from P5 to P95 of the spread can be trimmed to the
target, with the target near mid-travel. Trimmer values come in 1-2-5 steps per decade
(common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pulsepick.circuits.base import RUNS, get_core
from pulsepick.engine import fast

#: Trimmer values per decade, 1-2-5 steps (common practice).
TRIM_MANTISSAS = (1.0, 2.0, 5.0)
TRIM_STEPS_NOTE = "trimmer values in 1-2-5 steps per decade (common practice)"
TRIM_RANGE_OHM = (100.0, 10e6)  # smallest and largest trimmer offered (common practice)
#: The target should sit inside this share of the trimmer's travel (mid-travel).
MID_TRAVEL = (0.3, 0.7)
#: A retune trimmer also absorbs this fraction either way around the needed value
#: (part tolerances and a later re-trim; estimate).
RETUNE_MARGIN = 0.10


def trimmer_values() -> np.ndarray:
    """All trimmer values offered, ohm (1-2-5 steps)."""
    lo, hi = (math.floor(math.log10(x)) for x in TRIM_RANGE_OHM)
    vals = [m * 10.0 ** d for d in range(lo, hi + 1) for m in TRIM_MANTISSAS]
    return np.array([v for v in vals if TRIM_RANGE_OHM[0] <= v <= TRIM_RANGE_OHM[1]])


def period_part(design) -> str:
    """The circuit value (``r1``, ``ra`` or ``rb``) that sets most of the period.

    555 astable: t = ln2·(RA + 2·RB)·C (ref:maplin-555-notes), so RA when RA > 2·RB, else
    RB. Schmitt cores: their first timing resistor (R1).
    """
    core = get_core(design.topo.core)
    resistors = [p.name for p in core.params if p.kind == "R"]
    if design.chip.is_timer:
        ra, rb = (design.values.get(n, 0.0) for n in resistors[:2])
        return resistors[0] if ra > 2.0 * rb else resistors[1]
    return resistors[0]


def size_trimmer(needed: float, lo: float, hi: float, series: str = "E24"
                 ) -> tuple[float, float] | None:
    """``(fixed, trimmer)`` in ohm covering ``lo..hi`` with ``needed`` near mid-travel.

    The fixed part is a standard value of ``series`` that stays at or below ``lo`` at the
    top of its tolerance; the trimmer is the smallest 1-2-5 value that reaches ``hi``
    from the fixed part at the bottom of its tolerance, with ``needed`` within 30-70 % of
    the travel. None when no pair fits.
    """
    from pulsepick.series import get_series

    s = get_series(series)
    tol = s.tolerance_pct / 100.0  # the fixed part's own tolerance (its series' usual)
    for pot in trimmer_values():
        if pot < hi - lo:
            continue
        fixed_vals = s.values(max(lo / 100.0, 1.0), lo / (1.0 + tol))
        if fixed_vals.size == 0:
            continue
        pos = (needed - fixed_vals) / pot
        ok = ((fixed_vals * (1.0 - tol) + pot >= hi) & (pos >= MID_TRAVEL[0])
              & (pos <= MID_TRAVEL[1]))
        if ok.any():
            i = int(np.argmin(np.where(ok, np.abs(pos - 0.5), np.inf)))
            return float(fixed_vals[i]), float(pot)
    return None


def retune_trimmer(needed: float, lo: float, hi: float, series: str = "E24"):
    """A retune's trimmer: the measured range widened by RETUNE_MARGIN either way."""
    return size_trimmer(needed, min(lo, needed * (1 - RETUNE_MARGIN)),
                        max(hi, needed * (1 + RETUNE_MARGIN)), series)


@dataclass(frozen=True)
class TrimPlan:
    """A fixed resistor plus a trimmer in place of one timing resistor (SI units)."""

    param: str  # circuit value replaced (r1, ra, rb)
    fixed_ohm: float  # ohm, the fixed resistor
    trimmer_ohm: float  # ohm, the trimmer's full value
    needed_range_ohm: tuple[float, float]  # ohm, total needed by the P5..P95 builds
    setting_ohm: float  # ohm, trimmer setting for the nominal build
    yield_before: float  # fraction of builds within the band, untrimmed
    yield_after: float  # fraction of builds that can be trimmed to the target
    note: str = TRIM_STEPS_NOTE
    ref: str = ""  # reference designator of the replaced resistor on the board (R1, ...)


def _needed(design, key: str, ratio: np.ndarray) -> np.ndarray:
    """Value of ``key`` that moves the nominal period by ``ratio`` (arrays), ohm."""
    x0 = design.values[key]
    grid = x0 * np.geomspace(0.2, 5.0, 161)
    per = np.asarray(design.fast().period_s, dtype=float)  # nominal
    env, powered = design.env()
    vals = {**design.working_values(env), key: grid}
    p = np.asarray(fast.evaluate(design.topo, vals, env, powered=powered).period_s, dtype=float)
    ok = np.isfinite(p)
    lp, lg = np.log(p[ok] / float(np.ravel(per)[0])), np.log(grid[ok])
    if lp.size < 2:
        return np.full(np.shape(ratio), np.nan)
    if lp[0] > lp[-1]:
        lp, lg = lp[::-1], lg[::-1]
    out = np.exp(np.interp(np.log(ratio), lp, lg, left=np.nan, right=np.nan))
    return out


def trim_plan(design, spread, target_period_s: float, series: str = "E24",
              yield_band: float = 0.10) -> TrimPlan | None:
    """Size a trimmer for ``design`` from its spread (a SpreadResult with samples).

    Each build's period P_b is taken as the nominal period times a factor the parts and
    chip set; the trimmed part must move the period by target/P_b (estimate: the
    factor does not depend on the trimmed part's own value).
    """
    per = np.asarray(spread.samples.get("period_s", []), dtype=float)
    status = np.asarray(spread.samples.get("status", []))
    runs = np.isfinite(per) & (status == RUNS) if status.size == per.size else np.isfinite(per)
    if runs.sum() < 10:
        return None
    key = period_part(design)
    need = _needed(design, key, target_period_s / per[runs])
    need = np.asarray(need, dtype=float)
    if not np.isfinite(need).any():
        return None
    p5, p95 = np.nanpercentile(need, [5.0, 95.0])
    centre = float(np.nanmedian(need))
    sized = size_trimmer(centre, float(p5), float(p95), series)
    if sized is None:
        return None
    fixed, pot = sized
    good_after = float(np.mean((need >= fixed) & (need <= fixed + pot)) * runs.mean())
    good_before = float(np.mean(np.abs(per[runs] / target_period_s - 1) <= yield_band)
                        * runs.mean())
    return TrimPlan(param=key, fixed_ohm=fixed, trimmer_ohm=pot,
                    needed_range_ohm=(float(p5), float(p95)), setting_ohm=centre - fixed,
                    yield_before=good_before, yield_after=good_after)
