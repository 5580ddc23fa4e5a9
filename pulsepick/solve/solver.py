"""The solver's entry point :func:`solve`: run the searches per circuit variant and rank
what they find.
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import replace
from typing import Any

import numpy as np

from pulsepick.circuits.base import DARK, RUNS, Topology, core_fits_chip, get_core, get_stage
from pulsepick.hints import hint
from pulsepick.request import SolveRequest
from pulsepick.runner import Runner, runner_or_serial
from pulsepick.solve.explain import _explain, _prechecks
from pulsepick.solve.score import PARTS_WEIGHT, missed_keys, misses, n_parts
from pulsepick.solve.search import _Pick, _Searcher
from pulsepick.solve.space import _chip, _space, _variants, aim_env, aim_levels, stage_cap_kind
from pulsepick.solve.types import Candidate, SolveResult

#: Timing networks already swept in this process for the current search (a task per
#: stage shares its core's sweep).
_TIMING_CACHE: dict[Any, Any] = {}
#: Numbers the searches of this process (a worker serving several searches starts each
#: one's sweeps afresh, so each search counts its own).
_SEARCHES = itertools.count()


def _search_task(req: SolveRequest, family: str, core: str, steer: str,
                 topos: list[Topology], search: int = 0
                 ) -> tuple[list[_Pick], int, dict[str, list[float]]]:
    """One search task (a core variant and its stage topologies) for one chip family
    of search number ``search``."""
    from pulsepick.engine.environment import PartChoice, chip_model, make_env

    chip = _chip(req, family)
    model = chip_model(chip)
    s = _Searcher(req, chip)
    env, _ = make_env(chip, PartChoice(led=req.led), req.supply_v)
    env = aim_env(req, chip, core, steer, env)
    s.set_aim(core, steer)
    s.set_chip_envs(env, model)
    if _TIMING_CACHE.get("request") != (search, req):
        _TIMING_CACHE.clear()
        _TIMING_CACHE["request"] = (search, req)
    key = (family, core, steer)
    if key in _TIMING_CACHE:  # swept already in this process: evaluations counted then
        tim, seen = _TIMING_CACHE[key]
        s.seen.update(seen)
    else:
        tim = s.timing(core, steer)
        _TIMING_CACHE[key] = (tim, dict(s.seen))
    picks: list[_Pick] = []
    if tim is not None and tim.cost.size:
        for topo in topos:
            picks.extend(s.stage(topo, tim, env))
    return picks, s.evaluated, s.seen


def solve(req: SolveRequest, *, runner: Runner | None = None) -> SolveResult:
    """Search every admissible circuit for ``req``; the best of each topology, ranked.

    ``runner`` (:mod:`pulsepick.runner`; default: in this process) runs the search
    tasks, e.g. on the caller's worker processes. Reference verification, spread,
    drift and warnings come from :func:`assess`.
    """
    t_start = time.perf_counter()
    _TIMING_CACHE.clear()  # each search counts and times its own sweeps
    search = next(_SEARCHES)
    explanations, nothing = _prechecks(req)
    tasks, notes = _search_tasks(req, search)
    explanations += notes
    explanations += _request_notes(req)
    picks, evaluated, seen = _run_searches(tasks, runner)
    chosen = _chosen_picks(req, picks)
    aims = req.aims()
    candidates = [_candidate(req, rank, pick, aims) for rank, pick in enumerate(chosen, start=1)]
    running = [c for c in candidates if c.figures["status"] == RUNS]
    nearest = None
    if not running and candidates:
        nearest = dict(candidates[0].figures)
    explanations += _explain(req, aims, seen, running)
    success = bool(running) and not nothing
    if not success and not explanations:
        explanations.append("No combination of the allowed parts oscillates with a visible "
                            "LED at this supply; widen the value ranges, allow more circuits "
                            f"({hint('cores')}, {hint('stages')}) or another LED or chip.")
    if not success:
        running = []
    else:
        running = [replace(c, rank=i) for i, c in enumerate(running, start=1)]
    message = (f"{len(running)} circuits offered" if success else
               "nothing can be offered for this request")
    return SolveResult(
        request=req, candidates=tuple(running), explanations=tuple(explanations),
        nearest=nearest, evaluated=evaluated, search_s=time.perf_counter() - t_start,
        success=success, message=message,
    )


def _search_tasks(req: SolveRequest, search: int) -> tuple[list[tuple], list[str]]:
    """The search tasks (arguments of :func:`_search_task`) for every chip family
    powered at the supply, and the note naming the families left out."""
    from pulsepick.engine.environment import chip_model

    tasks = []
    unpowered = []
    for family in req.families:
        chip = _chip(req, family)
        model = chip_model(chip)
        if not bool(model.in_range(req.supply_v)):
            unpowered.append(f"{family} ({model.vdd_min_v:g}-{model.vdd_max_v:g} V)")
            continue
        for core, steer, topos in _variants(req):
            if core_fits_chip(core, chip.is_timer):
                tasks.append((req, family, core, steer, topos, search))
    notes = []
    if unpowered:
        notes.append(
            f"At {req.supply_v:.2f} V these chips are outside their supply range and were "
            f"left out: {', '.join(unpowered)}.")
    return tasks, notes


def _request_notes(req: SolveRequest) -> list[str]:
    """Notes on the request itself: a family given that stops before the end of the
    night, no timing capacitor or resistor in the allowed values."""
    notes = []
    if "family" not in req.defaults:
        from pulsepick.packing import family_plan

        note = family_plan(req).note  # the family given stops before the end of the night
        if note:
            notes.append(f"Family {note}.")
    space = _space(req)
    where = f"in {req.stock.source}" if req.stock is not None else "in the allowed ranges"
    if space.c_timing.size == 0:
        kinds = ", ".join(req.timing_caps)
        notes.append(f"No timing capacitor of the kinds allowed ({kinds}) is {where}; "
                     f"allow other kinds with {hint('timing_cap')} or widen "
                     f"{hint('cap_range')}.")
    if space.r_timing.size == 0:
        notes.append(f"No timing resistor is {where} ({hint('min_r')} to {hint('max_r')}).")
    return notes


def _run_searches(tasks: list[tuple], runner: Runner | None
                  ) -> tuple[list[_Pick], int, dict[str, list[float]]]:
    """Run the search tasks: every pick found, the evaluations counted and the span of
    each figure seen."""
    picks: list[_Pick] = []
    evaluated = 0
    seen: dict[str, list[float]] = {}
    # every search draws the median chip with numpy.random and sizes its capacitors:
    # imported once here, the workers forked for the search start with these modules
    # instead of each importing them
    import numpy.random  # noqa: F401

    import pulsepick.analysis.median
    import pulsepick.parts.capsize  # noqa: F401

    for task_picks, n, task_seen in runner_or_serial(runner).map(
            _search_task, tasks):
        picks.extend(task_picks)
        evaluated += n
        for key, (lo, hi) in task_seen.items():
            old = seen.get(key)
            seen[key] = [min(lo, old[0]), max(hi, old[1])] if old else [lo, hi]
    return picks, evaluated, seen


def _nearest(req: SolveRequest, picks: list[_Pick]) -> list[_Pick]:
    """``picks`` without those whose flash or brightness misses its aim by more than a
    factor of two where another pick meets that aim: a miss is shown only when nothing
    closer exists (and is then flagged). A figure every pick misses (a peak beyond the
    LED's rating, say) leaves the others to decide; when no pick meets all the aims that
    some pick meets, those missing the fewest stay."""
    if not picks:
        return picks
    keyed = [(p, set(missed_keys(req, p.figures))) for p in picks]
    unavoidable = set.intersection(*(k for _, k in keyed))
    near = [p for p, k in keyed if k <= unavoidable]
    if near:
        return near
    fewest = min(len(k) for _, k in keyed)
    return [p for p, k in keyed if len(k) == fewest]


def _chosen_picks(req: SolveRequest, picks: list[_Pick]) -> list[_Pick]:
    """The picks to offer, best first: near the aims, diverse, over-rated ones last."""
    picks.sort(key=lambda p: p.cost)
    picks = _nearest(req, picks)

    # diversity: the best of each topology (core and stage) first, then the next best
    chosen: list[_Pick] = []
    groups: set[tuple] = set()
    for pick in picks:
        key = (pick.topo.core, pick.topo.stage)
        if key not in groups:
            groups.add(key)
            chosen.append(pick)
    chosen = chosen[:req.top]
    # then other variants (polarity, buffering, chip), then other timing networks; a
    # mere change of the LED resistor is a near-copy and never fills a place
    for ident in (_ident_variant, _ident_timing):
        taken = {ident(p) for p in chosen}
        for pick in picks:
            if len(chosen) >= req.top:
                break
            if ident(pick) not in taken:
                taken.add(ident(pick))
                chosen.append(pick)
    chosen.sort(key=lambda p: p.cost)
    # a circuit with a current over a rating (the LED's, a gate pin's) never ranks first
    chosen.sort(key=lambda p: _over_rating(req, p))
    return chosen


def _over_rating(req: SolveRequest, pick: _Pick) -> bool:
    """True when a current of the pick is over a rating (the LED's, a gate pin's)."""
    from pulsepick.analysis.ratings import over_rating
    from pulsepick.design import Design
    from pulsepick.engine.environment import PartChoice

    d = Design(pick.topo, pick.values, _chip(req, pick.family), PartChoice(led=req.led),
               req.supply_v)
    return over_rating(d, float(pick.figures["led_peak_a"]))


def _candidate(req: SolveRequest, rank: int, pick: _Pick, aims: dict) -> Candidate:
    """The pick offered at ``rank``: its design with parts, figures, errors and notes."""
    from pulsepick.design import Design
    from pulsepick.engine.environment import PartChoice

    design = Design(pick.topo, pick.values, _chip(req, pick.family),
                    PartChoice(led=req.led, timing_cap=pick.kind,
                               stage_cap=_stage_kind(req, pick)), req.supply_v)
    figs = pick.figures
    errors = {key: (figs[key] / target - 1.0 if np.isfinite(figs[key]) else math.nan)
              for key, (target, _) in aims.items()}
    return Candidate(
        rank=rank, design=design, parts=_parts(req, design, figs), figures=figs,
        errors=errors, score=pick.cost,
        score_parts=dict(pick.parts_cost, parts=PARTS_WEIGHT * n_parts(pick.topo,
                                                                        pick.values)),
        period_spread=math.sqrt(pick.var), end_figures=pick.end_figures,
        notes=_candidate_notes(req, design, figs, pick.end_figures),
        aim_levels_v=aim_levels(req, design.chip, pick.topo.core, pick.topo.steer),
        misses=misses(req, figs),
    )


def _ident_variant(pick: _Pick) -> tuple:
    """A topology variant on one chip family."""
    return (pick.family, pick.topo)


def _ident_timing(pick: _Pick) -> tuple:
    """A topology variant with its timing network's values."""
    from pulsepick.circuits.base import get_core

    names = [p.name for p in get_core(pick.topo.core).params]
    return (pick.family, pick.topo, tuple(pick.values[n] for n in names), pick.kind)


def _stage_kind(req: SolveRequest, pick: _Pick) -> str:
    for name in ("cp", "ch"):
        if name in pick.values:
            return _stock_kind(req, pick.values[name]) or stage_cap_kind(pick.values[name])
    return "electrolytic"


def _stock_kind(req: SolveRequest, value: float) -> str | None:
    """The dielectric the drawer gives for a capacitor value, if it names one."""
    if req.stock is None:
        return None
    for item in req.stock.items:
        if item.kind == "C" and item.dielectric and math.isclose(item.value, value,
                                                                 rel_tol=1e-9):
            return "film-pet" if item.dielectric == "film" else item.dielectric
    return None


def _parts(req: SolveRequest, design, figs: dict[str, float]) -> tuple:
    from pulsepick.partslist import DRAWER_RESISTOR_TOL_PCT, parts_list

    tol = DRAWER_RESISTOR_TOL_PCT if req.stock is not None else None
    return parts_list(design, r_series=req.r_series, c_series=req.c_series, r_tolerance_pct=tol,
                      led_peak_a=figs["led_peak_a"])


def _candidate_notes(req, design, figs, end) -> tuple[str, ...]:
    from pulsepick.units import format_eng

    notes = []
    if end is not None and end["status"] != RUNS:
        from pulsepick.design import status_word

        notes.append(f"at the end of the night ({req.supply_end_v:.2f} V) the circuit is "
                     f"{status_word(end['status'])}")
    if get_stage(design.topo.stage).steady_load and not design.topo.buffered \
            and get_core(design.topo.core).drives_stage_from_timing_output:
        notes.append("the LED hangs on the timing gate's output: its load is in the figures")
    if figs["status"] == DARK:
        notes.append(f"the LED gets {format_eng(figs['led_peak_a'], 'A')}: too little to be seen")
    return tuple(notes)
