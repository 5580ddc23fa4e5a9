"""Retune a built blinker: what its measured timing says about its chip, and which one
or two part changes bring it to the wanted blink.

One measured period gives one unknown: the chip is taken at one common position in
the datasheet spread for both thresholds (the split normal of
:func:`pulsepick.analysis.bench.limit_percentile`; estimate: a chip sits high or low as
a whole). A period and a flash length give both thresholds where the flash is one
of the timing phases. A 555's levels are fractions of its supply (ratiometric), so a
miss there comes from the parts; it is carried as an effective scale of C1.

Every change is predicted with the fast engine and the inferred chip, and again at the
ends of the measurement's uncertainty, which gives the range left over.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from scipy.optimize import brentq, least_squares

from pulsepick.analysis.bench import Z_LIMIT
from pulsepick.analysis.trim import TRIM_STEPS_NOTE, period_part, retune_trimmer
from pulsepick.circuits.base import get_core, get_stage
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.errors import RequestError
from pulsepick.parts.logic import get_family
from pulsepick.units import format_eng

#: A single standard value is enough when it lands within this fraction of the wanted
#: period; beyond it two-part and trimmer changes are offered.
SINGLE_ENOUGH = 0.02
#: Weight of the flash error against the period error in the ranking (estimate).
FLASH_WEIGHT = 0.5
#: Candidate single values span this factor either way of the present value.
SEARCH_FACTOR = 4.0
#: The one-unknown inference searches this many standard deviations either way of the
#: typical chip (twice the distance to the datasheet limits).
Z_SPAN = 2.0 * Z_LIMIT
#: Evaluations allowed to the two-threshold solve before it gives up.
_MAX_SOLVE_CALLS = 60
#: Positions of VT- in its spread at which a consistent VT+ is sought.
CONSISTENT_POINTS = 5
#: Largest resistor of a two-part combination, ohm (leakage starts to count; common practice).
COMBO_MAX_OHM = 10e6
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


@dataclass(frozen=True)
class Change:
    """One way to bring the blinker to the wanted blink."""

    rank: int
    kind: str  # "single", "add-series", "add-parallel", "series", "parallel" or "trimmer"
    param: str  # circuit value changed (r1, ra, ...)
    values: dict[str, float]  # the whole circuit after the change (ohm / farad)
    parts: tuple[str, ...]  # the change in words, one line per new part
    new_parts: tuple[tuple[str, str, float, str], ...]  # (ref, "R"/"C"/"RV", value, role)
    predicted: dict[str, float]  # period_s, flash_s, led_peak_a with the inferred chip
    period_range_s: tuple[float, float]  # s, over the measurement's uncertainty and the
    # chips it cannot tell apart
    error: float  # predicted period / wanted - 1
    note: str


@dataclass(frozen=True)
class RetuneResult:
    design: Design  # the circuit as built
    measured: Measured
    want_period_s: float
    want_flash_s: float | None
    inferred: Inferred
    predicted_now: dict[str, float]  # the built circuit with the inferred chip
    changes: tuple[Change, ...]
    notes: tuple[str, ...]


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


# ---------------------------------------------------------------------------- changes

def _candidates(kind: str, x: float, series_r: str, series_c: str, stock,
                cap_kind: str) -> np.ndarray:
    from pulsepick.series import get_series

    lo, hi = x / SEARCH_FACTOR, x * SEARCH_FACTOR
    if stock is not None:
        pool = stock.resistors() if kind == "R" else [v for v, _ in
                                                      stock.capacitors((cap_kind,))]
        vals = np.array(sorted({v for v in pool if lo <= v <= hi}), dtype=float)
        if vals.size:
            return vals
    return get_series(series_r if kind == "R" else series_c).values(lo, hi)


def _needed_value(design, param, chip, cross, target) -> float | None:
    """The exact value of ``param`` that gives the wanted period, or None."""
    x0 = design.values[param]
    grid = x0 * np.geomspace(1.0 / 10.0, 10.0, 241)
    per = np.asarray(_figures(design, {param: grid}, chip, cross).period_s, dtype=float)
    ok = np.isfinite(per)
    if ok.sum() < 2:
        return None
    lg, lp = np.log(grid[ok]), np.log(per[ok])
    if np.all(np.diff(lp) > 0):
        pass
    elif np.all(np.diff(lp) < 0):
        lg, lp = lg[::-1], lp[::-1]
    else:
        return None
    t = math.log(target)
    if not lp[0] <= t <= lp[-1]:
        return None
    return float(np.exp(np.interp(t, lp, lg)))


def _combos(x: float, series: str) -> list[tuple[str, float, float, float]]:
    """Best two standard values in series and in parallel for ``x``: (how, a, b, value)."""
    from pulsepick.series import get_series

    s = get_series(series)
    out = []
    big = s.values(x / 100.0, x)
    rest = x - big
    ok = rest > 0
    if ok.any():
        b = np.asarray(s.nearest(rest[ok]), dtype=float)
        tot = big[ok] + b
        i = int(np.argmin(np.abs(tot / x - 1)))
        pair = sorted((float(big[ok][i]), float(b[i])), reverse=True)
        out.append(("series", pair[0], pair[1], float(tot[i])))
    if x >= COMBO_MAX_OHM:
        return out
    big = s.values(x, min(10.0 * x, COMBO_MAX_OHM))
    inv = 1.0 / x - 1.0 / big
    ok = (inv > 0) & (inv > 1.0 / COMBO_MAX_OHM)
    if ok.any():
        b = np.asarray(s.nearest(1.0 / inv[ok]), dtype=float)
        tot = 1.0 / (1.0 / big[ok] + 1.0 / b)
        i = int(np.argmin(np.abs(tot / x - 1)))
        out.append(("parallel", float(big[ok][i]), float(b[i]), float(tot[i])))
    return out


def _added(x: float, x0: float, series: str) -> tuple[str, float, float] | None:
    """One standard value added to the present ``x0`` to make ``x``: (how, added, total)."""
    from pulsepick.series import get_series

    s = get_series(series)
    if x > x0:
        b = float(s.nearest(x - x0))
        return "series", b, x0 + b
    inv = 1.0 / x - 1.0 / x0
    if inv <= 1.0 / COMBO_MAX_OHM:
        return None
    b = float(s.nearest(1.0 / inv))
    return "parallel", b, 1.0 / (1.0 / x0 + 1.0 / b)


def _ref(param: str) -> str:
    return param.upper()


def retune(design: Design, measured: Measured, want_period_s: float, *,
           want_flash_s: float | None = None, r_series: str = "E24", c_series: str = "E12",
           stock=None, top: int = 5) -> RetuneResult:
    """Infer the chip from ``measured`` and rank changes of one or two parts."""
    if not want_period_s > 0:
        raise RequestError("the wanted period must be above 0 s")
    inf = infer(design, measured)
    chip = (inf.vt_plus_v, inf.vt_minus_v, inf.c_scale)
    cross = inf.cross_current_a
    core, stage = get_core(design.topo.core), get_stage(design.topo.stage)
    params = [p for p in core.params if design.values.get(p.name, 0) > 0]
    if want_flash_s is not None:
        params += [p for p in stage.params if design.values.get(p.name, 0) > 0]

    chips = [chip, *inf.consistent]

    def score_one(f) -> np.ndarray:
        e = np.abs(np.asarray(f.period_s, dtype=float) / want_period_s - 1.0)
        if want_flash_s is not None:
            e = e + FLASH_WEIGHT * np.abs(np.asarray(f.flash_s, dtype=float) / want_flash_s - 1)
        return np.where(np.isfinite(e), e, np.inf)

    def score(param: str, vals) -> np.ndarray:
        """Worst error over the chips the measurement cannot tell apart."""
        vals = np.atleast_1d(np.asarray(vals, dtype=float))
        return np.max([score_one(_figures(design, {param: vals}, c, cross)) for c in chips],
                      axis=0)

    raw: list[tuple] = []  # (score, kind, param, new value, parts, new_parts, note)
    for p in params:
        x = design.values[p.name]
        cap_kind = (design.parts.timing_cap if p in core.params
                    else design.parts.stage_cap)
        vals = _candidates(p.kind, x, r_series, c_series, stock, cap_kind)
        vals = vals[~np.isclose(vals, x, rtol=1e-9)]
        if vals.size == 0:
            continue
        sc = score(p.name, vals)
        for i in np.argsort(sc)[:2]:
            if math.isfinite(sc[i]):
                unit = "Ω" if p.kind == "R" else "F"
                v = float(vals[i])
                raw.append((sc[i], "single", p.name, v,
                            (f"{_ref(p.name)}: {format_eng(v, unit)} "
                             f"(was {format_eng(x, unit)})",),
                            ((_ref(p.name), p.kind, v, p.role),), ""))
    best_single = min((r[0] for r in raw), default=math.inf)
    key = period_part(design)
    needed = _needed_value(design, key, chip, cross, want_period_s)
    if best_single > SINGLE_ENOUGH and needed is not None:
        role = next(p.role for p in core.params if p.name == key)
        x0 = design.values[key]
        added = _added(needed, x0, r_series)
        if added is not None:
            how, b, tot = added
            ref = _ref(key)
            words = (f"{ref}: keep {format_eng(x0, 'Ω')} and add {format_eng(b, 'Ω')} in "
                     f"{how} = {format_eng(tot, 'Ω')}")
            sc = float(score(key, tot)[0])
            raw.append((sc, "add-" + how, key, tot, (words,),
                        ((f"{ref}B", "R", b, f"added in {how} with {ref}"),), ""))
        for how, a, b, tot in _combos(needed, r_series):
            ref = _ref(key)
            words = (f"{ref}: {format_eng(a, 'Ω')} {'+' if how == 'series' else '∥'} "
                     f"{format_eng(b, 'Ω')} in {how} = {format_eng(tot, 'Ω')}")
            sc = float(score(key, tot)[0])
            raw.append((sc, how, key, tot, (words,),
                        ((f"{ref}A", "R", a, role), (f"{ref}B", "R", b, role)), ""))
        lo_hi = [_needed_value(design, key, b, cross, want_period_s) for b in inf.bounds]
        span = [v for v in lo_hi if v is not None] or [needed]
        trim = retune_trimmer(needed, min(span), max(span), r_series)
        if trim is not None:
            fixed, pot = trim
            ref = _ref(key)
            words = (f"{ref}: {format_eng(fixed, 'Ω')} fixed + {format_eng(pot, 'Ω')} "
                     f"trimmer in series, set to {format_eng(needed - fixed, 'Ω')} "
                     f"({(needed - fixed) / pot:.0%} of its travel)")
            sc = float(score(key, needed)[0])
            raw.append((sc, "trimmer", key, needed, (words,),
                        ((ref, "R", fixed, "fixed part of " + role),
                         (f"RV{ref[1:] or '1'}", "RV", pot, "trimmer of " + role)),
                        TRIM_STEPS_NOTE))
    order = sorted(raw, key=lambda r: (r[0] > SINGLE_ENOUGH, len(r[5]), r[1] == "trimmer",
                                       r[0]))
    changes = []
    for rank, (_, kind, param, value, parts, new, note) in enumerate(order[:top], start=1):
        vals = {**design.values, param: value}
        f = _figures(design, {param: np.array([value])}, chip, cross).row(0)
        ends = [_scalar(_figures(design, {param: np.array([value])}, b, cross).period_s)
                for b in (*inf.bounds, *inf.consistent)]
        changes.append(Change(
            rank=rank, kind=kind, param=param, values=vals, parts=parts, new_parts=new,
            predicted={k: f[k] for k in ("period_s", "flash_s", "led_peak_a")},
            period_range_s=(min(*ends, f["period_s"]), max(*ends, f["period_s"])),
            error=f["period_s"] / want_period_s - 1.0, note=note))
    now = _figures(design, {}, chip, cross).row(0)
    return RetuneResult(design=design, measured=measured, want_period_s=want_period_s,
                        want_flash_s=want_flash_s, inferred=inf,
                        predicted_now={k: now[k] for k in ("period_s", "flash_s",
                                                           "led_peak_a")},
                        changes=tuple(changes), notes=tuple(_notes(design)))


def _notes(design: Design) -> list[str]:
    core = get_core(design.topo.core)
    if design.chip.is_timer:
        return ["the 555's threshold and trigger levels are fixed fractions of its supply "
                "(ratiometric), so a missed period comes from the parts (mostly C1's "
                "tolerance), not from the chip"]
    r_parts = [p for p in core.params if p.kind == "R"]
    if len(r_parts) == 1:
        ref = _ref(r_parts[0].name)
        return [f"{ref} alone sets both phases: scaling {ref} scales the period exactly, "
                "whatever the chip's thresholds did"]
    return []
