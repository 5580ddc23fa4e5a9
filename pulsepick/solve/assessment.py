"""The checks of each offered candidate: reference engine, spread over tolerances and
chips, drift and the median note.
"""

from __future__ import annotations

import math
import time
from collections.abc import Collection, Sequence
from dataclasses import replace
from typing import Any

import numpy as np

from pulsepick.circuits.base import get_stage
from pulsepick.design import levels_kw
from pulsepick.hints import hint
from pulsepick.runner import Runner, runner_or_serial
from pulsepick.solve.texts import time_text
from pulsepick.solve.types import SolveResult

#: Relative tolerance of the reference run that checks an offered circuit: its figures
#: land within 7e-5 of a run at the engine's default 1e-9 (the supply current; the
#: period within 1e-6; measured on 32 offered circuits of 7 requests, tests/test_solve.py
#: holds them to 1e-4), finer than the 0.01 % the report shows, in 60 % of the time.
CHECK_RTOL = 1e-6


def _assess_reference(design, levels: tuple[float, float] | None = None) -> tuple[Any, float]:
    """The reference run of one design and the time it took, s (runs in a worker).

    ``levels`` (V): the reference run uses these switching levels (the median chip the
    search aimed at), so that it checks the figures the candidate shows.
    """
    t = time.perf_counter()
    kw = levels_kw(levels)
    return design.reference(rtol=CHECK_RTOL, **kw), time.perf_counter() - t


def _assess_spread(design, target_period_s: float, builds: int, seed: int,
                   supply_end_v: float | None, r_tols: dict[str, float],
                   levels: tuple[float, float] | None = None, *,
                   full: bool = True) -> dict[str, Any]:
    """The spread of one design over its builds (a task of the worker pool; the
    arguments are those of :func:`_assess_args`). ``full``: with the variance shares
    and the worst-case corners (see :func:`assess`)."""
    from pulsepick.analysis.spread import spread
    from pulsepick.errors import PulsepickError

    out: dict[str, Any] = {"warnings": []}
    t = time.perf_counter()
    supply_range = None if supply_end_v is None else (supply_end_v, design.supply_v)
    try:
        out["spread"] = spread(design, target_period_s=target_period_s, builds=builds,
                               seed=seed, supply_range_v=supply_range,
                               resistor_tol_pct=r_tols or None, shares=full,
                               corners=full)
    except PulsepickError as err:
        out["warnings"].append(f"spread analysis: {err}")
    out["timings_s"] = {"spread": time.perf_counter() - t}
    return out


def _assess_checks(design, target_period_s: float, builds: int, seed: int,
                   supply_end_v: float | None, r_tols: dict[str, float],
                   levels: tuple[float, float] | None = None) -> dict[str, Any]:
    """Drift, warnings and the period the candidate shows, of one design (a task of the
    worker pool; the arguments are those of :func:`_assess_args`).

    ``levels`` (V): the switching levels of the median chip the search aimed at (see
    :func:`_assess_reference`).
    """
    from pulsepick.analysis.checks import assumptions, circuit_warnings
    from pulsepick.analysis.drift import drift
    from pulsepick.errors import PulsepickError

    out: dict[str, Any] = {"timings_s": {}, "warnings": []}
    kw = levels_kw(levels)
    if supply_end_v is not None:
        t = time.perf_counter()
        try:
            out["drift"] = drift(design, design.supply_v, supply_end_v, levels=levels)
        except PulsepickError as err:
            out["warnings"].append(f"drift analysis: {err}")
        out["timings_s"]["drift"] = time.perf_counter() - t
    try:  # the figures the candidate shows, for the warnings and the median note
        aim = design.fast(**kw)
        shown = {"status": int(np.ravel(aim.status)[0]),
                 "peak_a": float(np.ravel(aim.led_peak_a)[0])}
        if levels is not None:
            out["aimed_period_s"] = float(np.ravel(aim.period_s)[0])
    except PulsepickError:
        shown = {}
    try:
        out["warnings"].extend(circuit_warnings(design, levels=levels, **shown))
    except PulsepickError as err:
        out["warnings"].append(f"checks: {err}")
    if not design.chip.is_timer:
        out["crossing_current"] = assumptions(design).get("crossing_current")
    return out


#: The median build is worth a line when it is this far (fraction) off the nominal period.
MEDIAN_NOTE_SHIFT = 0.05
#: Thresholds whose typical value sits further than this share of their min..max range
#: from its middle are "off-centre".
OFF_CENTRE_SHARE = 0.1


def _thresholds_off_centre(design) -> bool:
    """Whether the chip's typical switching levels sit off the middle of their limits."""
    from pulsepick.engine.environment import chip_model

    if design.chip.measured:
        return False
    model = chip_model(design.chip)
    v = design.supply_v
    if design.chip.is_timer:
        triples = [(model.thr_ratio_min, model.thr_ratio_typ, model.thr_ratio_max),
                   (model.trig_ratio_min, model.trig_ratio_typ, model.trig_ratio_max)]
    else:
        th = model.thresholds(v)
        triples = [(th.vt_plus_min, th.vt_plus_typ, th.vt_plus_max),
                   (th.vt_minus_min, th.vt_minus_typ, th.vt_minus_max)]
    for lo, typ, hi in triples:
        lo, typ, hi = float(lo), float(typ), float(hi)
        if hi > lo and abs(typ - 0.5 * (lo + hi)) > OFF_CENTRE_SHARE * (hi - lo):
            return True
    return False


def _moves(spread, source: str) -> bool:
    """Whether ``source`` moves the builds: its variance share is above nil (where the
    spread has the shares), else it varies over the builds."""
    if spread.shares:
        return spread.shares.get(source, 0.0) > 0
    return bool(spread.source_varies.get(source, False))


def median_note(design, spread, aimed_period_s: float | None = None) -> str | None:
    """A line when the Monte Carlo median period is off the nominal one, with the cause.

    The nominal figures use the chip's typical thresholds (or, with ``aimed_period_s``,
    the median chip the solver aimed at); the builds draw them with the typical value
    as the median, so where the typical value sits near one limit the median build
    moves away from the typical chip's. A supply range spread over the builds moves it
    too.
    """
    p50 = spread.quantiles.get("period_s", (math.nan,) * 3)[1]
    nominal = spread.nominal.get("period_s", math.nan)
    if aimed_period_s is not None:
        nominal = aimed_period_s
    if not (math.isfinite(p50) and math.isfinite(nominal) and nominal > 0):
        return None
    shift = p50 / nominal - 1.0
    if abs(shift) < MEDIAN_NOTE_SHIFT:
        return None
    text = (f"the median build blinks at {time_text(p50)} ({shift:+.0%} on the nominal "
            f"{time_text(nominal)})")
    causes = []
    if (aimed_period_s is None and _thresholds_off_centre(design)
            and _moves(spread, "chip_thresholds")):
        causes.append("the chip's typical thresholds sit off-centre in its datasheet limits "
                      "(the builds draw them between the minimum and maximum); measure your "
                      f"chip's thresholds and give {hint('vt_plus')} and {hint('vt_minus')} "
                      "to centre on it")
    if spread.supply_range_v is not None and _moves(spread, "supply"):
        lo, hi = spread.supply_range_v
        causes.append(f"the builds' supply is spread over {lo:g}..{hi:g} V while the "
                      f"nominal is at {design.supply_v:g} V")
    if not causes:
        causes.append("the spread of the parts is lopsided")
    return text + ": " + "; and ".join(causes)


def assess(result: SolveResult, *, runner: Runner | None = None,
           detail: Collection[int] | None = None) -> SolveResult:
    """Verify every candidate with the reference engine and add spread, drift, warnings.

    Parameters
    ----------
    result : SolveResult
        From :func:`solve`.
    runner : Runner, optional
        Runs the candidates' checks (:mod:`pulsepick.runner`; default: in this
        process). The reference engine takes tenths of a second per circuit, so two
        worker processes nearly halve the wall time on two cores.
    detail : collection of int, optional
        The ranks (1 = best) whose spread also carries the variance share of each
        source and the worst-case corners; default every candidate. The others get the
        builds alone (median, P5..P95, yield and every build's figures, the same as
        with them), in about a third of the time: a report that shows one candidate
        in full asks for that one.
    """
    req = result.request
    cands = list(result.candidates)
    if not cands:
        return result
    # the spread uses the resistor tolerances of the parts list (the series asked for)
    args = [_assess_args(req, c) for c in cands]
    full = [detail is None or c.rank in detail for c in cands]
    outputs, _ = _assess_outputs(args, runner, full=full)
    return result.with_candidates(tuple(_assessed(c, out) for c, out in zip(
        cands, outputs, strict=True)))


def _levels_kw(c) -> dict[str, float]:
    """Keyword arguments that evaluate a design at candidate ``c``'s aimed levels."""
    return levels_kw(c.aim_levels_v)


def _assess_args(req, c) -> tuple:
    """The arguments of :func:`_assess_one` for candidate ``c`` of request ``req``."""
    return (c.design, req.targets.period_s, req.builds, req.seed, req.supply_end_v,
            {p.param: p.tolerance_pct for p in c.parts if p.kind == "resistor"},
            c.aim_levels_v)


def _assess_outputs(args: list, runner: Runner | None = None, during=None,
                    full: Sequence[bool] | None = None) -> tuple[list[dict[str, Any]], Any]:
    """The assessment of each argument tuple (see :func:`_assess_args`) on ``runner``,
    and the result of ``during()`` (None when not given), which runs in this process
    while the runner's workers work. ``full`` (one flag per tuple, default all true):
    which spreads carry the variance shares and the corners.

    Each design is three tasks, its spread, its drift and checks, and its reference run,
    so that one costly design does not hold up a worker while another idles; the
    costliest go first, on the workers that searched.
    """
    from pulsepick.limits import workers_for_builds

    run = runner_or_serial(runner)
    got: list[Any] = []
    meanwhile = None if during is None else lambda: got.append(during())
    full = [True] * len(args) if full is None else list(full)
    tasks = [(part, a, f) for a, f in zip(args, full, strict=True) for part in _PARTS]
    # the costliest stages first, each one's spread before its checks
    order = sorted(range(len(tasks)), key=lambda i: (
        get_stage(tasks[i][1][0].topo.stage).search_rank, i))
    # bounded memory for many builds: fewer processes at once when each spread is large
    limit = workers_for_builds(len(tasks), max((a[2] for a in args), default=0))
    parts = run.map(_assess_part, tasks, order=order, limit=limit, meanwhile=meanwhile)
    n = len(_PARTS)
    outputs = [_joined(a, *parts[n * i:n * (i + 1)]) for i, a in enumerate(args)]
    return outputs, (got[0] if got else None)


#: The tasks of one design, in the order their results are joined.
_PARTS = ("spread", "checks", "reference")


def _assess_part(part: str, args: tuple, full: bool = True):
    """One task of the worker pool: the spread (``full``: with shares and corners), the
    checks or the reference run of a design (see :func:`_assess_outputs`)."""
    if part == "reference":
        return _assess_reference(args[0], args[6])
    if part == "spread":
        return _assess_spread(*args, full=full)
    return _assess_checks(*args)


def _joined(args: tuple, spread: dict[str, Any], checks: dict[str, Any],
            reference: tuple[Any, float]) -> dict[str, Any]:
    """The assessment of one design (arguments ``args``) from its three tasks."""
    out = {**checks, **spread, "reference": reference[0],
           "warnings": spread["warnings"] + checks["warnings"],
           "timings_s": {"reference": reference[1], **spread["timings_s"],
                         **checks["timings_s"]}}
    if out.get("spread") is not None:
        out["median_note"] = median_note(args[0], out["spread"], checks.get("aimed_period_s"))
    return out


def _assessed(c, out: dict[str, Any]):
    """Candidate ``c`` with the reference run, spread, drift and warnings of ``out``."""
    return replace(
        c, reference=out["reference"], spread=out.get("spread"), drift=out.get("drift"),
        warnings=tuple(out["warnings"]), timings_s=out["timings_s"],
        crossing_current=out.get("crossing_current"), median_note=out.get("median_note"),
    )
