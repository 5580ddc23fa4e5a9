"""The timing-network searches of :class:`pulsepick.solve.search._Searcher`, one per core's
``timing_search``: one resistor, steered (R1 then R2), two resistors (RB then RA).

Each sweeps the series grid of the allowed ranges and keeps the best few networks per
capacitor value as a :class:`_Timing` (see :mod:`pulsepick.solve`, step 1). ``searcher``
is the :class:`~pulsepick.solve.search._Searcher` in progress: its space, environments and
timing evaluation.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from pulsepick.circuits.base import get_core, RUNS, stage_names, Topology
from pulsepick.solve.score import _best_per_group, _log_err, K_SLOW, K_TIMING


@dataclass
class _Timing:
    """Kept timing networks of one core variant (arrays, one element each)."""

    values: dict[str, np.ndarray]
    kind: np.ndarray  # index into _Space.kinds
    g_typ: np.ndarray  # S, typical leakage conductance of C1
    var: np.ndarray  # fraction², expected squared spread of the period
    cost: np.ndarray
    penalty: np.ndarray  # cost added for stalling with the hot-end leakage
    t_high: np.ndarray  # s, charging phase with an unloaded output
    t_low: np.ndarray  # s, discharging phase with an unloaded output


def search_timing(searcher, core: str, steer: str) -> _Timing | None:
    """The kept timing networks of ``core`` (steered ``steer``), or None without a grid."""
    sp = searcher.space
    if sp.c_timing.size == 0 or sp.r_timing.size == 0:
        return None
    R, C = sp.r_timing, sp.c_timing
    nr, nc = R.size, C.size
    ri = np.tile(np.arange(nr), nc)
    ci = np.repeat(np.arange(nc), nr)
    core_model = get_core(core)
    search = core_model.timing_search
    plain = Topology(core_model.slow_phase_core, stage_names()[0])
    if search == "one-resistor":
        return _one_resistor(searcher, plain, R, C, ri, ci)
    if search == "steered":
        return _steered(searcher, core, steer, plain, R, C, ri, ci)
    return _two_resistor(searcher, core, R, C, ri, ci)


def _one_resistor(searcher, plain: Topology, R, C, ri, ci) -> _Timing:
    """R1·C1 over the whole grid."""
    sp = searcher.space
    vals = {"r1": R[ri], "c1": C[ci]}
    cost, var, g, pen, th, tl = searcher._timing_eval(plain, vals, sp.c_kind[ci], None)
    keep = _best_per_group(cost, ci, 2, K_TIMING)
    return _Timing({k: v[keep] for k, v in vals.items()}, sp.c_kind[ci][keep], g[keep],
                   var[keep], cost[keep], pen[keep], th[keep], tl[keep])


def _steered(searcher, core: str, steer: str, plain: Topology, R, C, ri, ci) -> _Timing:
    """R1·C1 sets the slow phase (the plain core's phase), then R2 the fast phase."""
    sp = searcher.space
    nr = R.size
    # step 1: R1·C1 sets the slow phase (the plain core's phase)
    vals = {"r1": R[ri], "c1": C[ci]}
    c_kind = sp.c_kind[ci]
    g = searcher._cap_leak(vals["c1"], c_kind, "typ")
    th, tl, st = searcher._periods(plain, searcher._working(vals, c_kind, searcher.envs["typ"]),
                                   replace(searcher.envs["typ"], cap_leak_g=g))
    slow = tl if steer == "high" else th
    # R1 alone moves the slow phase: charging for a fast low phase, else discharging
    ok1 = (st == RUNS) & searcher._leak_ok(plain, vals, g,
                                           ("up",) if steer == "low" else ("down",))
    cost1 = np.where(ok1, _log_err(slow, searcher.long_target) ** 2
                     + sp.r_tol**2 + searcher.cap_var[c_kind], np.inf)
    keep1 = _best_per_group(cost1, ci, 3, K_SLOW)
    # step 2: R2 sets the fast phase
    k1, kr = keep1.size, nr
    base = np.repeat(keep1, kr)
    vals2 = {"r1": vals["r1"][base], "r2": np.tile(R, k1), "c1": vals["c1"][base]}
    topo = Topology(core, stage_names()[0], steer=steer)
    short_of = (lambda a, b: a) if steer == "high" else (lambda a, b: b)
    cost, var, g2, pen, th, tl = searcher._timing_eval(topo, vals2, c_kind[base], short_of)
    keep = _best_per_group(cost, ci[base], 2, K_TIMING)
    return _Timing({k: v[keep] for k, v in vals2.items()}, c_kind[base][keep],
                   g2[keep], var[keep], cost[keep], pen[keep], th[keep], tl[keep])


def _two_resistor(searcher, core: str, R, C, ri, ci) -> _Timing:
    """RB·C1 sets the low phase (RA at its smallest), then RA the period."""
    sp = searcher.space
    nr = R.size
    # two resistors (RA, RB), step 1: RB·C1 sets the low phase (RA at its smallest)
    vals = {"ra": np.full(ri.size, R[0]), "rb": R[ri], "c1": C[ci]}
    c_kind = sp.c_kind[ci]
    g = searcher._cap_leak(vals["c1"], c_kind, "typ")
    topo = Topology(core, stage_names()[0])
    th, tl, st = searcher._periods(topo, searcher._working(vals, c_kind, searcher.envs["typ"]),
                                   replace(searcher.envs["typ"], cap_leak_g=g))
    ok1 = (st == RUNS) & searcher._leak_ok(topo, vals, g, ("down",))  # RB discharges
    cost1 = np.where(ok1, _log_err(tl, searcher.short_target) ** 2
                     + sp.r_tol**2 + searcher.cap_var[c_kind], np.inf)
    keep1 = _best_per_group(cost1, ci, 3, K_SLOW)
    base = np.repeat(keep1, nr)
    vals2 = {"ra": np.tile(R, keep1.size), "rb": vals["rb"][base], "c1": vals["c1"][base]}
    cost, var, g2, pen, th, tl = searcher._timing_eval(topo, vals2, c_kind[base],
                                                       lambda a, b: b)
    keep = _best_per_group(cost, ci[base], 2, K_TIMING)
    return _Timing({k: v[keep] for k, v in vals2.items()}, c_kind[base][keep], g2[keep],
                   var[keep], cost[keep], pen[keep], th[keep], tl[keep])
