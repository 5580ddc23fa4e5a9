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
from dataclasses import dataclass

import numpy as np

from pulsepick.analysis.retune_infer import (  # noqa: F401  (re-exported)
    CONSISTENT_POINTS,
    Z_SPAN,
    Inferred,
    Measured,
    _figures,
    _scalar,
    infer,
)
from pulsepick.analysis.trim import TRIM_STEPS_NOTE, period_part, retune_trimmer
from pulsepick.circuits.base import get_core, get_stage
from pulsepick.design import Design
from pulsepick.errors import RequestError
from pulsepick.units import format_eng

#: A single standard value is enough when it lands within this fraction of the wanted
#: period; beyond it two-part and trimmer changes are offered.
SINGLE_ENOUGH = 0.02
#: Weight of the flash error against the period error in the ranking (estimate).
FLASH_WEIGHT = 0.5
#: Candidate single values span this factor either way of the present value.
SEARCH_FACTOR = 4.0
#: Largest resistor of a two-part combination, ohm (leakage starts to count; common practice).
COMBO_MAX_OHM = 10e6


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
    score = _scorer(design, want_period_s, want_flash_s, [chip, *inf.consistent], cross)

    raw = _single_changes(design, core, params, r_series, c_series, stock, score)
    best_single = min((r[0] for r in raw), default=math.inf)
    key = period_part(design)
    needed = _needed_value(design, key, chip, cross, want_period_s)
    if best_single > SINGLE_ENOUGH and needed is not None:
        raw += _resistor_changes(design, core, key, needed, inf, want_period_s, r_series,
                                 score)
    order = sorted(raw, key=lambda r: (r[0] > SINGLE_ENOUGH, len(r[5]), r[1] == "trimmer",
                                       r[0]))
    changes = _changes(design, order[:top], chip, cross, inf, want_period_s)
    now = _figures(design, {}, chip, cross).row(0)
    return RetuneResult(design=design, measured=measured, want_period_s=want_period_s,
                        want_flash_s=want_flash_s, inferred=inf,
                        predicted_now={k: now[k] for k in ("period_s", "flash_s",
                                                           "led_peak_a")},
                        changes=tuple(changes), notes=tuple(_notes(design)))


def _scorer(design: Design, want_period_s: float, want_flash_s: float | None, chips, cross):
    """The error of candidate values of one part: the worst over the chips the measurement
    cannot tell apart (period, and flash when wanted)."""
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

    return score


def _single_changes(design: Design, core, params, r_series: str, c_series: str, stock,
                    score) -> list[tuple]:
    """The two best single standard values of each part:
    (score, kind, param, new value, parts, new_parts, note) each."""
    raw: list[tuple] = []
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
    return raw


def _resistor_changes(design: Design, core, key: str, needed: float, inf: Inferred,
                      want_period_s: float, r_series: str, score) -> list[tuple]:
    """The period resistor made up of two parts: one added, a pair, or a fixed part and a
    trimmer, each as (score, kind, param, new value, parts, new_parts, note)."""
    raw: list[tuple] = []
    cross = inf.cross_current_a
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
    return raw


def _changes(design: Design, order, chip, cross, inf: Inferred,
             want_period_s: float) -> list[Change]:
    """The ranked changes with their predicted figures and period range."""
    changes = []
    for rank, (_, kind, param, value, parts, new, note) in enumerate(order, start=1):
        vals = {**design.values, param: value}
        f = _figures(design, {param: np.array([value])}, chip, cross).row(0)
        ends = [_scalar(_figures(design, {param: np.array([value])}, b, cross).period_s)
                for b in (*inf.bounds, *inf.consistent)]
        changes.append(Change(
            rank=rank, kind=kind, param=param, values=vals, parts=parts, new_parts=new,
            predicted={k: f[k] for k in ("period_s", "flash_s", "led_peak_a")},
            period_range_s=(min(*ends, f["period_s"]), max(*ends, f["period_s"])),
            error=f["period_s"] / want_period_s - 1.0, note=note))
    return changes


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
