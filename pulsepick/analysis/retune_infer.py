"""The chip a built blinker's measured period (and flash) points to, for
:mod:`pulsepick.analysis.retune`, which re-exports the public names.

The measurement is matched with the fast engine: a period alone places the chip at one
common position in its datasheet spread, a period and a flash give both thresholds, and a
555's miss is carried as an effective scale of C1 (the reasoning is in the retune module).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from scipy.optimize import brentq, least_squares

from pulsepick.analysis.bench import Z_LIMIT
from pulsepick.circuits.base import get_core
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.errors import RequestError
from pulsepick.parts.logic import get_family
from pulsepick.units import format_eng

#: The one-unknown inference searches this many standard deviations either way of the
#: typical chip (twice the distance to the datasheet limits).
Z_SPAN = 2.0 * Z_LIMIT
#: Evaluations allowed to the two-threshold solve before it gives up.
_MAX_SOLVE_CALLS = 60
#: Positions of VT- in its spread at which a consistent VT+ is sought.
CONSISTENT_POINTS = 5
#: The flash tells the two thresholds apart only if its relative sensitivity to them
#: differs from the period's by more than this (else the 2-by-2 system is ill-posed).
_MIN_INDEPENDENCE = 0.05


@dataclass(frozen=True)
class Measured:
    """What was measured on the built blinker (SI units)."""

    period_s: float  # s
    period_unc_s: float  # s, +/- uncertainty
    flash_s: float | None = None  # s, at half peak
    flash_unc_s: float = 0.0  # s
    supply_current_a: float | None = None  # A, average draw of the whole blinker

    def __post_init__(self) -> None:
        if not (math.isfinite(self.period_s) and self.period_s > self.period_unc_s >= 0):
            raise RequestError(f"the measured period {self.period_s:g} s must be longer than "
                               f"its uncertainty {self.period_unc_s:g} s; time more periods")
        if self.flash_s is not None and not (
                math.isfinite(self.flash_s) and self.period_s > self.flash_s > self.flash_unc_s):
            raise RequestError(f"the measured flash {self.flash_s:g} s must be shorter than "
                               "the period and longer than its uncertainty")
        if self.supply_current_a is not None and not self.supply_current_a > 0:
            raise RequestError("the measured supply current must be above 0 A, e.g. 40uA")


@dataclass(frozen=True)
class Inferred:
    """The chip (or the parts' miss) inferred from the measurement."""

    which: str  # "scale" (one threshold scale), "both" (VT+ and VT-), "ratiometric" (555)
    vt_plus_v: float  # V, at the circuit's supply
    vt_minus_v: float  # V
    c_scale: float  # effective scale of C1 (1 except for the 555)
    bounds: tuple[tuple[float, float, float], ...]  # (VT+, VT-, C scale) at the ends
    cross_current_a: float | None  # A, crossing current that explains the measured draw
    text: str  # what was inferred, in words
    consistent: tuple[tuple[float, float, float], ...] = ()  # other chips that fit as well



def _c_name(design: Design) -> str:
    return next(p.name for p in get_core(design.topo.core).params if p.kind == "C")


def _figures(design: Design, values: dict[str, Any], chip: tuple[float, float, float],
             cross=None):
    """Fast figures of ``values`` (arrays allowed) with the chip ``(VT+, VT-, C scale)``."""
    vtp, vtm, c_scale = chip
    d = design if cross is None else replace(design, chip=replace(design.chip,
                                                                  cross_current_a=cross))
    kw = {} if design.chip.is_timer else {"vt_plus": vtp, "vt_minus": vtm}
    env, powered = d.env(**kw)
    c = _c_name(design)
    vals = {**design.values, **values}
    vals[c] = np.asarray(vals[c], dtype=float) * c_scale * d.timing_cap_factor(env)
    return fast.evaluate(design.topo, vals, env, powered=powered)


def _scalar(x) -> float:
    return float(np.ravel(x)[0])


def _typical(design: Design) -> tuple[float, float]:
    env, _ = design.env()
    return _scalar(env.vt_plus), _scalar(env.vt_minus)


def _solve_scale(design: Design, period: float) -> tuple[float, float, float]:
    """The chip (VT+, VT-, C scale) whose fast period equals ``period``."""
    if design.chip.is_timer:
        def f_c(k):
            return _scalar(_figures(design, {}, (0, 0, k)).period_s) - period
        return (*_typical(design), brentq(f_c, 0.05, 20.0, xtol=1e-10))
    vdd = design.supply_v

    def chip_at(z):
        return _chip_at_z(design, z)

    z = np.linspace(-Z_SPAN, Z_SPAN, 481)
    vtp, vtm = chip_at(z)
    per = np.asarray(_figures(design, {}, (vtp, vtm, 1.0)).period_s, dtype=float)
    err = np.where(np.isfinite(per), per - period, np.nan)
    sign = np.sign(err)
    cross = np.flatnonzero((sign[:-1] * sign[1:] < 0) & np.isfinite(err[:-1])
                           & np.isfinite(err[1:]))
    if cross.size == 0:
        # the thresholds' common position barely moves this period: take the chip nearest
        # the typical one among those that fit
        others = _consistent(design, period)
        if not others:
            raise RequestError(f"no chip of this family gives a period of {period:g} s with "
                               f"these parts at {vdd:g} V; check the values, the supply and "
                               "the family")
        t0 = _typical(design)
        return min(others, key=lambda c: abs(c[0] / t0[0] - 1) + abs(c[1] / t0[1] - 1))
    i = int(cross[np.argmin(np.abs(z[cross]))])  # the crossing nearest the typical chip

    def f_z(zz):
        a, b = chip_at(zz)
        return _scalar(_figures(design, {}, (a, b, 1.0)).period_s) - period

    z0 = brentq(f_z, z[i], z[i + 1], xtol=1e-10)
    a, b = chip_at(z0)
    return float(a), float(b), 1.0


def _chip_at_z(design: Design, z):
    """VT+ and VT- at one common position ``z`` (standard deviations) in the spread.

    The split-normal spread of :func:`pulsepick.analysis.bench.limit_percentile`: the
    datasheet typical as median, the limits at z = -3.09 and +3.09 (estimate).
    """
    t = get_family(design.chip.family).thresholds(design.supply_v)
    z = np.asarray(z, dtype=float)
    out = []
    for lo, typ, hi in ((t.vt_plus_min, t.vt_plus_typ, t.vt_plus_max),
                        (t.vt_minus_min, t.vt_minus_typ, t.vt_minus_max)):
        lo, typ, hi = float(lo), float(typ), float(hi)
        sigma = np.where(z < 0, (typ - lo) / Z_LIMIT, (hi - typ) / Z_LIMIT)
        out.append(typ + z * sigma)
    vdd = design.supply_v
    vtp = np.clip(out[0], 1e-3 * vdd, 0.999 * vdd)
    vtm = np.clip(out[1], 1e-3 * vdd, 0.999 * vtp)
    return vtp, vtm


def _solve_both(design: Design, period: float, flash: float, start) -> tuple | None:
    """Both thresholds from a period and a flash, or None when the flash cannot tell."""
    vdd = design.supply_v

    def resid(x):
        f = _figures(design, {}, (x[0], x[1], 1.0))
        return [_scalar(f.period_s) / period - 1.0, _scalar(f.flash_s) / flash - 1.0]

    x0 = np.array(start[:2])
    r0 = np.array(resid(x0))
    jac = np.zeros((2, 2))
    for j in range(2):
        dx = np.zeros(2)
        dx[j] = 1e-4 * vdd
        jac[:, j] = (np.array(resid(x0 + dx)) - r0) / dx[j]
    norms = np.linalg.norm(jac, axis=1, keepdims=True)
    rows = jac / np.maximum(norms, 1e-300)
    # a tenth of the supply on the thresholds must move the flash by a percent or more
    if abs(np.linalg.det(rows)) < _MIN_INDEPENDENCE or norms[1, 0] * 0.1 * vdd < 0.01:
        return None
    sol = least_squares(resid, x0, bounds=([1e-3 * vdd, 1e-3 * vdd], [0.999 * vdd] * 2),
                        xtol=1e-12, ftol=1e-12, max_nfev=_MAX_SOLVE_CALLS)
    vtp, vtm = float(sol.x[0]), float(sol.x[1])
    if not (0 < vtm < vtp < vdd) or max(abs(v) for v in sol.fun) > 1e-3:
        return None
    return vtp, vtm, 1.0


def infer(design: Design, measured: Measured) -> Inferred:
    """What the measurement says about the chip (or, for a 555, about the parts)."""
    p, u = measured.period_s, measured.period_unc_s
    nom = _solve_scale(design, p)
    ends = [_solve_scale(design, p - u), _solve_scale(design, p + u)]
    which = "ratiometric" if design.chip.is_timer else "scale"
    vdd = design.supply_v
    if design.chip.is_timer:
        text = (f"the 555's levels are ratiometric, so the chip is not inferred: the parts "
                f"act as if C1 were {nom[2]:.3f} times its marked value")
    else:
        text = (f"one unknown: VT+ {nom[0]:.3f} V and VT- {nom[1]:.3f} V at {vdd:g} V, the "
                "chip taken at one common position in the datasheet spread for both "
                "thresholds (one period gives one unknown)")
        if measured.flash_s is not None:
            both = _solve_both(design, p, measured.flash_s, nom)
            if both is None:
                text += ("; the flash does not tell the two thresholds apart in this "
                         "circuit (its stage sets the flash), so it is not used for the chip")
            else:
                fu = measured.flash_unc_s
                corners = [_solve_both(design, p + a, measured.flash_s + b, both)
                           for a in (-u, u) for b in (-fu, fu)]
                if all(c is not None for c in corners):
                    nom, ends, which = both, corners, "both"
                    text = (f"both thresholds from the period and the flash: VT+ "
                            f"{nom[0]:.3f} V, VT- {nom[1]:.3f} V at {vdd:g} V")
                else:
                    text += ("; the flash does not tell the two thresholds apart within its "
                             "timing uncertainty, so it is not used for the chip")
    if not design.chip.is_timer:
        text += _outside_limits(design, nom)
    cross = None
    if measured.supply_current_a is not None and not design.chip.is_timer:
        base = _scalar(_figures(design, {}, nom, cross=0.0).supply_avg_a)
        cross = max(measured.supply_current_a - base, 0.0)
        text += (f"; the measured draw leaves {format_eng(cross, 'A')} for the chip's "
                 "crossing current (replaces the estimate)")
    others = _consistent(design, p) if which == "scale" else []
    return Inferred(which=which, vt_plus_v=nom[0], vt_minus_v=nom[1], c_scale=nom[2],
                    bounds=tuple(ends), consistent=tuple(others), cross_current_a=cross,
                    text=text)


def _outside_limits(design: Design, nom) -> str:
    """A note when the inferred thresholds sit outside the family's datasheet limits."""
    t = get_family(design.chip.family).thresholds(design.supply_v)
    bad = []
    for name, v, lo, hi in (("VT+", nom[0], t.vt_plus_min, t.vt_plus_max),
                            ("VT-", nom[1], t.vt_minus_min, t.vt_minus_max)):
        lo, hi = float(lo), float(hi)
        if v < lo - 1e-6:
            bad.append(f"{name} {v:.3f} V under its {lo:.3g} V minimum")
        elif v > hi + 1e-6:
            bad.append(f"{name} {v:.3f} V over its {hi:.3g} V maximum")
    if not bad:
        return ""
    return ("; NOTE: this inferred chip is OUTSIDE the datasheet limits ("
            + ", ".join(bad) + f" at {design.supply_v:g} V), so the cause may be the build "
            "rather than the chip: check the parts' values, the supply, the wiring and the "
            "LED's loading before swapping parts")


def _consistent(design: Design, period: float) -> list[tuple[float, float, float]]:
    """Other chips inside the datasheet limits that give the same measured period.

    VT- is held at several positions of its spread and VT+ solved for; a change is
    ranked by its worst prediction over these, since one period cannot tell them apart.
    """
    t = get_family(design.chip.family).thresholds(design.supply_v)
    p_lo, p_hi = float(t.vt_plus_min), float(t.vt_plus_max)
    out = []
    for z in np.linspace(-Z_LIMIT, Z_LIMIT, CONSISTENT_POINTS):
        _, vtm = _chip_at_z(design, z)
        vtm = float(vtm)
        grid = np.linspace(max(p_lo, vtm * 1.001), p_hi, 97)
        if grid.size < 2 or grid[0] >= grid[-1]:
            continue
        per = np.asarray(_figures(design, {}, (grid, vtm, 1.0)).period_s, dtype=float)
        err = per - period
        ok = np.isfinite(err)
        cross = np.flatnonzero(ok[:-1] & ok[1:] & (np.sign(err[:-1]) * np.sign(err[1:]) < 0))
        if cross.size:
            i = int(cross[0])
            w = err[i] / (err[i] - err[i + 1])
            out.append((float(grid[i] + w * (grid[i + 1] - grid[i])), vtm, 1.0))
    return out

