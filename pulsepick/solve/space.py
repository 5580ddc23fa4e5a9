"""The search space: value grids and ranges per request, the stage capacitor kinds and the
circuit variants to search.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from pulsepick.circuits.base import get_core, get_stage, Topology
from pulsepick.circuits.searchgrid import STAGE_R_MIN_OHM
from pulsepick.engine.environment import TIMER_KEY
from pulsepick.request import SolveRequest
from pulsepick.solve.score import (
    AGING_DECADES, peak_needed, STAGE_ELECTROLYTIC_FROM_F, TEMP_RANGE_C,
)


@dataclass
class _Space:
    """Value grids of one request (SI units)."""

    r_timing: np.ndarray  # ohm
    r_stage: np.ndarray  # ohm
    c_stage: np.ndarray  # F
    kinds: tuple[str, ...]  # timing capacitor kind keys
    c_timing: np.ndarray  # F
    c_kind: np.ndarray  # index into kinds
    r_tol: float  # fraction


def _coarser(a: str, b: str) -> str:
    from pulsepick.series import SERIES_NAMES

    return a if SERIES_NAMES.index(a) <= SERIES_NAMES.index(b) else b


def _space(req: SolveRequest) -> _Space:
    from pulsepick.parts.capacitor import get_cap_kind
    from pulsepick.series import get_series

    rser = get_series(req.r_series)
    stage_r_hi = req.r_max_ohm
    if req.stock is not None:
        stock_r = np.array(req.stock.resistors(), dtype=float)
        r_timing = stock_r[(stock_r >= req.r_min_ohm) & (stock_r <= req.r_max_ohm)]
        r_stage = stock_r[(stock_r >= STAGE_R_MIN_OHM) & (stock_r <= stage_r_hi)]
        pairs = req.stock.capacitors(req.timing_caps)
        kinds = tuple(dict.fromkeys(k for _, k in pairs))
        c_list, k_list = [], []
        for value, key in pairs:
            kind = get_cap_kind(key)
            if max(req.c_min_f, kind.c_min_f) <= value <= min(req.c_max_f, kind.c_max_f) \
                    * (1 + 1e-9):
                c_list.append(value)
                k_list.append(kinds.index(key))
        all_c = sorted({i.value for i in req.stock.items if i.kind == "C" and i.qty != 0})
        c_stage = np.array([c for c in all_c if req.c_min_f <= c <= req.c_max_f], dtype=float)
    else:
        r_timing = rser.values(req.r_min_ohm, req.r_max_ohm)
        r_stage = rser.values(STAGE_R_MIN_OHM, stage_r_hi)
        kinds = tuple(req.timing_caps)
        c_list, k_list = [], []
        for i, key in enumerate(kinds):
            kind = get_cap_kind(key)
            lo = max(req.c_min_f, kind.c_min_f)
            hi = min(req.c_max_f, kind.c_max_f)
            if lo > hi:
                continue
            vals = get_series(_coarser(req.c_series, kind.series_default)).values(lo, hi)
            c_list.extend(vals.tolist())
            k_list.extend([i] * vals.size)
        small = get_series(req.c_series).values(req.c_min_f, req.c_max_f)
        big = get_series(_coarser(req.c_series, "E6")).values(req.c_min_f, req.c_max_f)
        c_stage = np.unique(np.concatenate([small[small < STAGE_ELECTROLYTIC_FROM_F],
                                            big[big >= STAGE_ELECTROLYTIC_FROM_F]]))
    return _Space(
        r_timing=np.asarray(r_timing, dtype=float), r_stage=np.asarray(r_stage, dtype=float),
        c_stage=np.asarray(c_stage, dtype=float),
        kinds=kinds,
        c_timing=np.asarray(c_list, dtype=float), c_kind=np.asarray(k_list, dtype=int),
        r_tol=rser.tolerance_pct / 100.0,
    )


def stage_cap_kind(value_f: float) -> str:
    """Capacitor kind used for a flash or hold capacitor of ``value_f`` farads."""
    return "electrolytic" if value_f >= STAGE_ELECTROLYTIC_FROM_F * (1 - 1e-9) else "x7r"


def _cap_var(kind_key: str) -> float:
    """Variance (fraction²) of a timing capacitor's value from tolerance, drift and age.

    A class-2 ceramic's loss under DC bias is not here: the circuit is evaluated at the
    value left under its working bias, as :class:`pulsepick.design.Design` does.
    """
    from pulsepick.parts.capacitor import get_cap_kind

    kind = get_cap_kind(kind_key)
    tol = max(kind.tol_minus_pct, kind.tol_plus_pct) / 100.0
    temp = max(abs(float(kind.temperature_factor(t, "typ")) - 1.0) for t in TEMP_RANGE_C)
    age = kind.aging_pct_per_decade / 100.0 * AGING_DECADES if kind.class2 else 0.0
    return (tol**2 + temp**2 + age**2) / 3.0



def _stage_wanted(req: SolveRequest, stage: str) -> bool:
    """A stage that only earns its parts at high currents is searched when the aimed
    peak reaches its ``search_from_peak_a``, or when the request names it."""
    floor = get_stage(stage).search_from_peak_a
    return floor <= 0 or "stages" not in req.defaults or peak_needed(req) >= floor


def _variants(req: SolveRequest) -> list[tuple[str, str, list[Topology]]]:
    """Search tasks: (core, steer, topology variants), one timing sweep each.

    The costliest first (steered cores, then the plain Schmitt, then the 555), so
    worker processes finish together.
    """
    out = []
    for core in req.cores:
        steers = get_core(core).steers
        if not get_core(core).bufferable:
            bufs: tuple[bool, ...] = (False,)
        elif req.buffered is None:
            bufs = (False, True)
        else:
            bufs = (req.buffered,)
        for steer in steers:
            topos = []
            for stage in sorted(req.stages, key=lambda s: get_stage(s).search_rank):
                if not _stage_wanted(req, stage):
                    continue
                topos += [Topology(core, stage, buf, lit, steer) for buf in bufs
                          for lit in get_stage(stage).lits]
            out.append((core, steer, topos))
    out.sort(key=lambda t: get_core(t[0]).search_rank)
    return out


def _chip(req: SolveRequest, family: str):
    from pulsepick.engine.environment import ChipSpec

    if family == TIMER_KEY or not req.chip_overrides:
        return ChipSpec(family, spread=req.chip_spread)
    return ChipSpec(family, spread=req.chip_spread, **req.chip_overrides)


def _aim_weights(req: SolveRequest, core: str, steer: str) -> tuple[float | None, float | None]:
    """(w_high, w_low) of :func:`pulsepick.analysis.median.median_levels` for a core."""
    t = req.targets
    short = min(min(req.flash_s, 0.99 * t.period_s), t.period_s - min(req.flash_s,
                                                                      0.99 * t.period_s))
    long = t.period_s - short
    search = get_core(core).timing_search
    if search == "one-resistor":  # one R sets both phases: the typical phase ratio
        return None, None
    if search == "steered" and steer == "high":  # a fast high phase: the low one is slow
        return short, long
    return long, short


def aim_levels(req: SolveRequest, chip, core: str, steer: str,
               supply_v: float | None = None) -> tuple[float, float]:
    """The switching levels (VT+, VT-) in V the search aims with: the median chip's.

    The phase weights are the aimed long and short phases for a steered core or a 555
    (the slow phase is the charging one for a fast low phase and for the 555), the
    typical chip's own ratio for the plain core (see :mod:`pulsepick.analysis.median`).
    At the design supply with a supply range, the levels give the median over the
    range's supplies too (the builds of the spread take their supply from it); at
    any other supply (the end of the night) they are that supply's own median chip.
    """
    from pulsepick.analysis.median import median_levels

    v = req.supply_v if supply_v is None else supply_v
    low = req.supply_end_v if v == req.supply_v else None
    return median_levels(chip, v, *_aim_weights(req, core, steer), low)


def range_aim_ratio(req: SolveRequest, chip, core: str, steer: str) -> float:
    """How much slower (above 1) the design-supply levels of :func:`aim_levels` run than
    the design supply's own median chip: the supply range's share of the aim."""
    from pulsepick.analysis.median import range_ratio

    return range_ratio(chip, req.supply_v, req.supply_end_v, *_aim_weights(req, core, steer))


def aim_env(req: SolveRequest, chip, core: str, steer: str, env):
    """``env`` with the median chip's levels (:func:`aim_levels`)."""
    vtp, vtm = aim_levels(req, chip, core, steer)
    return replace(env, vt_plus=np.asarray(vtp), vt_minus=np.asarray(vtm))
