"""Several lights in one build: :func:`solve_build` picks one circuit per light
(:class:`LightPick`, :class:`BuildResult`).
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from pulsepick.circuits.base import get_core
from pulsepick.engine.environment import TIMER_KEY
from pulsepick.errors import RequestError
from pulsepick.request import SolveRequest
from pulsepick.runner import Runner
from pulsepick.solve.assessment import _assess_args, _assess_outputs, _assessed, _levels_kw
from pulsepick.solve.solver import _parts, solve
from pulsepick.solve.types import Candidate, SolveResult


@dataclass(frozen=True)
class LightPick:
    """One light of a build: its own solve and the circuit chosen for the build."""

    name: str
    result: SolveResult  # the light's own solve, candidates as offered
    pick: Candidate | None  # the circuit used in the build (None: nothing offered)
    asked_s: float  # s, the period asked for this light
    moved: bool = False  # the spread-out search changed its timing values


@dataclass(frozen=True)
class BuildResult:
    """Several lights solved together (see :func:`solve_build`)."""

    request: Any  # BuildRequest (pulsepick.request)
    lights: tuple[LightPick, ...]
    plan: Any  # PackagePlan (pulsepick.analysis.multi), None when a light failed
    risks: tuple  # PairRisk per pair sharing a package, for the circuits as chosen
    risks_before: tuple | None  # the same before the spread-out search moved periods
    spread_out: Any  # SpreadOutChoice, or None
    total_supply_a: float  # A, all lights' average supply current at the design supply (a
    #   photoresistor light at the night's light level)
    success: bool
    message: str
    warnings: tuple[str, ...]
    search_s: float  # s, wall time
    lock_share: Any = None  # LockShare (pulsepick.analysis.lock) of the circuits as chosen
    lock_share_before: Any = None  # the same before the spread-out search moved periods
    remedies: tuple = ()  # Remedy, ranked by the lock share each leaves
    gating: Any = None  # BuildGating (pulsepick.analysis.gating); None without a detector
    rates: Any = None  # {light index: LightRate (pulsepick.packing)} for photoresistor lights
    night_designs: tuple = ()  # per light, the circuit as it runs at night (a photoresistor
    #   light at the night's light level, pulsepick.packing.night_designs); () when failed

    @property
    def picks(self) -> tuple[Candidate, ...]:
        return tuple(li.pick for li in self.lights if li.pick is not None)


def _use(name: str, cand: Candidate):
    from pulsepick.analysis.multi import LightUse

    d = cand.design
    return LightUse(name, d.chip.family, bool(d.topo.buffered and not d.chip.is_timer))


def _least_uses(breq) -> list:
    """The fewest gates each light could take (for the package check before solving)."""
    from pulsepick.analysis.multi import LightUse

    out = []
    for li in breq.lights:
        req = li.request
        schmitt = [f for f in req.families if f != TIMER_KEY]
        cores = [c for c in req.cores if get_core(c).chip_kind != "timer"]
        if schmitt and cores:
            out.append(LightUse(li.name, schmitt[0], bool(req.buffered)))
        else:
            out.append(LightUse(li.name, TIMER_KEY, False))
    return out


def _plan(breq, names, cands):
    from pulsepick.analysis.gating import detector_gates
    from pulsepick.analysis.multi import plan_packages

    return plan_packages([_use(n, c) for n, c in zip(names, cands, strict=True)],
                         dusk_detector=breq.dusk_detector,
                         periods_s=[c.figures["period_s"] for c in cands],
                         dusk_gates=detector_gates([c.design.topo for c in cands]))


def _fit_packages(breq, names, results, chosen: list[int]) -> list[int]:
    """Swap lights to other offered circuits (fewer gates, a shared family) so the build
    takes as few packages as the offered circuits allow; raises with the count when it
    cannot fit ``max_packages``. Among choices with the fewest packages the one reached
    with the fewest swaps (the best scores) is kept."""
    from pulsepick.analysis.multi import package_limit_error

    limit = breq.max_packages

    def state(choice):
        plan = _plan(breq, names, [results[i].candidates[k] for i, k in enumerate(choice)])
        return (len(plan.packages), plan.gates_needed), plan

    cur, plan = state(chosen)
    history = [(cur[0], list(chosen))]
    while cur[0] > 1:
        best = None
        for i, res in enumerate(results):
            for k in range(len(res.candidates)):
                if k == chosen[i]:
                    continue
                trial = chosen.copy()
                trial[i] = k
                st, _ = state(trial)
                if st < cur:
                    cost = res.candidates[k].score - res.candidates[chosen[i]].score
                    key = (st, cost)
                    if best is None or key < best[0]:
                        best = (key, trial)
        if best is None:
            break
        chosen = best[1]
        cur, plan = state(chosen)
        history.append((cur[0], list(chosen)))
    if limit is not None and cur[0] > limit:
        raise RequestError(package_limit_error(plan, limit))
    fewest = min(n for n, _ in history)
    return next(c for n, c in history if n == fewest)


def _one_family(breq, names, results, chosen: list[int]) -> list[int]:
    """Lights on one package need one logic family: move the others to the commonest."""
    fams = [results[i].candidates[k].design.chip.family for i, k in enumerate(chosen)]
    schmitt = [f for f in fams if f != TIMER_KEY]
    if len(set(schmitt)) <= 1:
        return chosen
    order = list(breq.lights[0].request.families)
    target = max(set(schmitt), key=lambda f: (schmitt.count(f), -order.index(f)
                                               if f in order else 0))
    for i in range(len(chosen)):
        if fams[i] in (target, TIMER_KEY):
            continue
        alts = [j for j, c in enumerate(results[i].candidates)
                if c.design.chip.family in (target, TIMER_KEY)]
        if alts:
            chosen[i] = alts[0]
    return chosen


def solve_build(breq, *, runner: Runner | None = None,
                assess_picks: bool = True) -> BuildResult:
    """Solve every light of ``breq`` and fit them on shared packages.

    Each light is solved as on its own (:func:`solve`); its best circuit is taken unless
    the build needs another to keep one logic family per package or to fit
    ``max_packages`` (then the offered circuit that frees gates at the least score is
    used). Pairs sharing a package are checked for lock risk, and with
    ``breq.spread_out`` their periods are moved within the tolerance to keep clear
    (:mod:`pulsepick.analysis.multi`). The chosen circuits are verified with
    :func:`assess` when ``assess_picks``. ``runner`` runs the searches and checks
    (:mod:`pulsepick.runner`; default: in this process).

    Raises
    ------
    RequestError
        when the lights cannot fit ``max_packages`` even with the fewest gates; the
        message gives the count.
    """
    from pulsepick.request import BuildRequest

    assert isinstance(breq, BuildRequest)
    t0 = time.perf_counter()
    names = [li.name for li in breq.lights]
    _check_least_packages(breq)
    from pulsepick import packing
    from pulsepick.packing import solve_lights

    results, pack_notes = solve_lights(breq, solve, runner=runner)
    failed = [n for n, r in zip(names, results, strict=True) if not r.success]
    if failed:
        return _failed_build(breq, names, results, failed, t0)
    chosen = _one_family(breq, names, results, [0] * len(results))
    chosen = _fit_packages(breq, names, results, chosen)
    picks = [results[i].candidates[k] for i, k in enumerate(chosen)]
    plan = _plan(breq, names, picks)
    groups = [plan.package_of(i) for i in range(len(picks))]
    asked = [li.request.targets.period_s for li in breq.lights]
    lock_seed = breq.lights[0].request.seed
    picks, rates, samples, periods, risks, night, share = _lock_state(breq, picks, groups,
                                                                      lock_seed)
    risks_before = None
    choice = None
    moved = [False] * len(picks)
    share_before = None
    if breq.spread_out:
        choice, new, moved = _spread_out(breq, picks, asked, groups, samples, periods, night,
                                         share)
        risks_before = risks
        share_before = share
        picks, rates, samples, periods, risks, night, share = _lock_state(breq, new, groups,
                                                                          lock_seed)
        choice = _spread_out_outcome(breq, choice, share_before, share)
    picks, remedies = _assess_with_remedies(breq, results, picks, groups, share, asked, night,
                                            lock_seed, runner, assess_picks)
    picks = _numbered(picks, rates, groups)
    gating = _dusk_gating(breq, picks, rates)
    warnings = _build_warnings(breq, names, pack_notes, share, remedies, gating, rates)
    total = _night_supply_a(picks, night)
    ok, message = packing.build_verdict(breq, len(picks), len(plan.packages), share,
                                        spread=choice is not None)
    lights = tuple(LightPick(n, r, c, asked[i], moved[i])
                   for i, (n, r, c) in enumerate(zip(names, results, picks, strict=True)))
    return BuildResult(request=breq, lights=lights, plan=plan, risks=risks,
                       risks_before=risks_before, spread_out=choice, total_supply_a=total,
                       success=ok, message=message, warnings=tuple(warnings),
                       search_s=time.perf_counter() - t0, lock_share=share,
                       lock_share_before=share_before, remedies=remedies, gating=gating,
                       rates=rates, night_designs=tuple(night))


def _check_least_packages(breq) -> None:
    """Raise before solving when even the fewest gates cannot fit ``max_packages``."""
    from pulsepick.analysis import multi

    if breq.max_packages is not None:
        least = multi.plan_packages(_least_uses(breq), dusk_detector=breq.dusk_detector)
        text = multi.package_limit_error(least, breq.max_packages)
        if text is not None:
            raise RequestError(text)


def _failed_build(breq, names, results, failed, t0: float) -> BuildResult:
    """The build when a light has nothing offered: each light's own solve and its
    explanations as warnings."""
    lights = tuple(LightPick(n, r, r.candidates[0] if r.candidates else None,
                             li.request.targets.period_s)
                   for n, r, li in zip(names, results, breq.lights, strict=True))
    return BuildResult(
        request=breq, lights=lights, plan=None, risks=(), risks_before=None,
        spread_out=None, total_supply_a=math.nan, success=False,
        message=f"nothing can be offered for {', '.join(failed)}",
        warnings=tuple(f"{n}: {e}" for n, r in zip(names, results, strict=True)
                       for e in r.explanations),
        search_s=time.perf_counter() - t0)


def _bands(breq, cands) -> list:
    """Each light's period ratio samples over its parts' tolerances."""
    from pulsepick.analysis import multi

    return [multi.ratio_samples(c.design, seed=breq.lights[i].request.seed + i,
                                resistor_tol_pct=_r_tols(c))
            for i, c in enumerate(cands)]


def _at_night(breq, cands):
    """A photoresistor light's network, and the light with the timing resistance the
    network has in the night's light: its figures are the night's."""
    from pulsepick import packing

    if not breq.photoresistors:
        return list(cands), {}
    lr = packing.light_rates(breq, cands)
    lux = packing.night_lux(breq)
    vals = packing.night_values(lr, cands, lux)
    return [_revalue(breq.lights[i].request, c, vals[i],
                     note=f"figures at the night's light level {lux:g} lx (typical "
                          "photoresistor)") if i in vals else c
            for i, c in enumerate(cands)], lr


def _lock_state(breq, cands, groups, lock_seed: int):
    """The picks with their figures at night and what the lock check reads of them:
    ``(picks, rates, samples, periods, risks, night, share)`` (the photoresistor lights'
    rates, each light's period ratio samples and period, the pair risks, the designs as
    they run at night and the build's lock share)."""
    from pulsepick import packing
    from pulsepick.analysis import multi

    picks, rates = _at_night(breq, cands)
    samples = _bands(breq, picks)
    periods = [c.figures["period_s"] for c in picks]
    risks = multi.lock_risks(periods, groups, samples, margin=breq.lock_margin)
    # a photoresistor light runs at night at its network's value in the night's light
    night = packing.night_designs(breq, picks, rates)
    share = packing.build_lock_share(breq, picks, groups, seed=lock_seed, designs=night)
    return picks, rates, samples, periods, risks, night, share


def _spread_out(breq, picks, asked, groups, samples, periods, night, share):
    """The spread-out search: the periods chosen within the tolerance to keep the pairs
    sharing a package clear of a lock, the picks with those timing values and which of
    them moved."""
    from pulsepick import packing
    from pulsepick.analysis import multi
    from pulsepick.analysis.lock import minimise_share

    options = [_period_options(breq.lights[i].request, c, asked[i], breq.period_tolerance)
               for i, c in enumerate(picks)]
    pairs = [(i, j) for i, j in itertools.combinations(range(len(picks)), 2)
             if groups[i] == groups[j]]
    offsets = {}
    for i, j in pairs:
        lo, hi = multi.pair_band(samples[i], samples[j])
        x = math.log(periods[i] / periods[j])
        offsets[(i, j)] = (lo - x, hi - x) if math.isfinite(lo) else (0.0, 0.0)
    choice = multi.choose_periods(asked, [o.periods_s for o in options], pairs, offsets,
                                  margin=breq.lock_margin, tolerance=breq.period_tolerance)
    # the least share of builds near a lock, from the clearest choice among others
    k = packing.night_scales(picks, night)
    best, _ = minimise_share([a * k[i] for i, a in enumerate(asked)],
                             [o.periods_s * k[i] for i, o in enumerate(options)], share,
                             [p * k[i] for i, p in enumerate(periods)], groups,
                             starts=[list(choice.chosen)])
    choice = replace(choice, chosen=tuple(best), chosen_s=tuple(
        float(options[i].periods_s[k]) for i, k in enumerate(best)))
    moved = [False] * len(picks)
    new = []
    for i, c in enumerate(picks):
        values = options[i].values[choice.chosen[i]]
        if choice.chosen[i] == options[i].original:
            new.append(c)
            continue
        moved[i] = True
        new.append(_revalue(breq.lights[i].request, c, values))
    return choice, new, moved


def _spread_out_outcome(breq, choice, share_before, share):
    """The spread-out choice with its verdict: the lock share it leaves against the limit."""
    from pulsepick.analysis.lock import ACCEPTABLE_LOCK_SHARE

    limit = (ACCEPTABLE_LOCK_SHARE if breq.max_lock_share is None
             else breq.max_lock_share)
    return replace(choice, success=share.share <= limit, message=(
        f"the share of builds with a pair near a lock goes from {share_before.share:.1%} "
        f"to {share.share:.1%} (least within {breq.period_tolerance:.0%} of the periods "
        "asked)"))


def _assess_with_remedies(breq, results, picks, groups, share, asked, night, lock_seed: int,
                          runner: Runner | None, assess_picks: bool):
    """The picks, verified with :func:`assess` when ``assess_picks``, and the remedies
    for the lock share, ranked by the share each leaves."""
    from pulsepick import packing

    chosen_picks = list(picks)

    def remedies_fn():
        return packing.lock_remedies(
            breq, chosen_picks, groups, share,
            lambda i, tol: _period_options(breq.lights[i].request, chosen_picks[i], asked[i],
                                           tol),
            seed=lock_seed, designs=night)

    if assess_picks:
        # every light's runs shared among the workers at once, the remedies meanwhile
        outs, remedies = _assess_outputs([_assess_args(r.request, c) for r, c in zip(
            results, picks, strict=True)], runner, during=remedies_fn)
        picks = [_assessed(c, out) for c, out in zip(picks, outs, strict=True)]
    else:
        remedies = remedies_fn()
    return picks, remedies


def _dusk_gating(breq, picks, rates):
    """The dusk detector's hold on every light (BuildGating); None without a detector."""
    if not breq.dusk_detector:
        return None
    from pulsepick import packing
    from pulsepick.analysis.gating import build_gating

    return build_gating(packing.held_designs(picks, rates), *packing.supply_span(
        breq.lights[0].request))


def _build_warnings(breq, names, pack_notes, share, remedies, gating, rates) -> list[str]:
    """The build's warnings: the packing notes, the pair most often near a lock and the
    remedies, a dusk hold that does not hold, the photoresistor lights' rates."""
    from pulsepick import packing

    warnings = list(pack_notes)
    near = [p for p in share.pairs if p.share > 0]
    if near:
        warnings.append(packing.share_text(names, max(near, key=lambda p: p.share),
                                           breq.lock_margin, breq.spread_out, share.share,
                                           len(near)))
    if any(p.share > 0 for p in share.pairs) and packing.remedies_text(remedies,
                                                                       breq.spread_out):
        warnings.append(packing.remedies_text(remedies, breq.spread_out))
    if breq.dusk_detector:
        for h in gating.holds:
            if not h.holds:
                warnings.append(
                    f"{names[h.light]}: the dusk hold leaves its timing node at "
                    f"{h.node_v:.2f} V at the end of the night's supply, not beyond the "
                    f"threshold limit of {h.limit_v:.2f} V; it may keep blinking by day")
    for i, lr in rates.items():
        warnings.extend(f"{names[i]}: {w}" for w in getattr(lr.rate, "warnings", ()))
    return warnings


def _night_supply_a(picks, night) -> float:
    """A, all lights' average supply current: the night's draw, a photoresistor light at
    the night's light level, every light at the switching levels its figures use (the
    median chip aimed at)."""
    return float(sum(c.figures["supply_avg_a"] if d is c.design else
                     np.ravel(d.fast(**_levels_kw(c)).supply_avg_a)[0]
                     for c, d in zip(picks, night, strict=True)))


def _numbered(picks, rates, groups) -> list:
    """The picks with one designator scheme for the whole build: each light's parts (a
    photoresistor light's network in place of its timing resistor) numbered across the
    build as the buy list numbers them, its chip the package it sits on, and its notes
    and warnings naming those designators."""
    from pulsepick.packing import rate_part_lines
    from pulsepick.partslist import number_light_parts, ref_map, renumber_text

    own = [rate_part_lines(rates[i], c.parts) if i in rates else c.parts
           for i, c in enumerate(picks)]
    numbered = number_light_parts(own)
    out = []
    for i, c in enumerate(picks):
        chip = tuple(replace(p, ref=f"U{groups[i]}") for p in c.parts if p.kind == "chip")
        refs = ref_map(c.parts, numbered[i], f"U{groups[i]}")
        out.append(replace(c, parts=chip + numbered[i],
                           notes=tuple(renumber_text(t, refs) for t in c.notes),
                           warnings=tuple(renumber_text(t, refs) for t in c.warnings)))
    return out


def _period_options(req: SolveRequest, c: Candidate, asked_s: float, tolerance: float):
    """Standard-value variants of a pick, from the drawer when the request has one."""
    from pulsepick.analysis.multi import period_options

    r_values = c_values = None
    if req.stock is not None:
        r_values = req.stock.resistors()
        c_values = [v for v, k in req.stock.capacitors((c.design.parts.timing_cap,))]
    return period_options(c.design, asked_s, tolerance, r_series=req.r_series,
                          c_series=req.c_series, r_values=r_values, c_values=c_values,
                          levels=c.aim_levels_v)


def _r_tols(c: Candidate) -> dict[str, float] | None:
    tols = {p.param: p.tolerance_pct for p in c.parts if p.kind == "resistor"}
    return tols or None


def _revalue(req: SolveRequest, c: Candidate, values: dict[str, float], *,
             note: str = "timing values moved by the spread-out search") -> Candidate:
    """The candidate with new timing values: figures, errors and parts follow."""
    design = replace(c.design, values=dict(values))
    figs = design.fast(**_levels_kw(c)).row(0)
    errors = {key: (figs[key] / target - 1.0 if np.isfinite(figs[key]) else math.nan)
              for key, (target, _) in req.aims().items()}
    return replace(c, design=design, figures=figs, errors=errors,
                   parts=_parts(req, design, figs), reference=None, spread=None, drift=None,
                   warnings=(), crossing_current=None, median_note=None,
                   notes=c.notes if note in c.notes else (*c.notes, note))
