"""Several lights in one build (a several-lights phrase or a design file).

The options become a :class:`~pulsepick.request.BuildRequest`, the build is solved
(:func:`pulsepick.solve.solve_build`), and :func:`run_build` prints the report
(:mod:`pulsepick.commands.solve_build_report`) or the JSON and writes one buy list.
"""

from __future__ import annotations

from typing import Any, NamedTuple

from pulsepick.commands.solve_build_report import render_build
from pulsepick.commands.solve_lock import _lock_grade, _risk_json, _share_json
from pulsepick.commands.solve_options import _chip_overrides, _led
from pulsepick.commands.solve_text import _nothing_line


def _is_build(args) -> bool:
    from pulsepick.designfile import is_design_file
    from pulsepick.request import split_lights

    return is_design_file(args.phrase) or (args.phrase is not None
                                           and split_lights(args.phrase) is not None)


def _build_context(args) -> dict:
    """Options given on the command line that apply to every light."""
    out = {"supply": args.supply, "family": args.family, "series": args.series,
           "cap_series": args.cap_series, "timing_cap": args.timing_cap, "max_r": args.max_r,
           "min_r": args.min_r, "cap_range": args.cap_range, "buffered": args.buffered,
           "stages": args.stages, "cores": args.cores, "stock": args.stock, "top": args.top,
           "builds": args.builds, "seed": args.seed}
    led = _led(args)
    if led is not None:
        out["led"] = led
    return out


def build_request_from_args(args):
    """The :class:`~pulsepick.request.BuildRequest` of a several-lights phrase or a file.

    Returns ``(build request, design file or None)``.
    """
    from pulsepick.designfile import build_request, is_design_file, read_design
    from pulsepick.errors import RequestError
    from pulsepick.request import make_build_request, split_lights

    given = [f"--{k}" for k in ("every", "flash", "peak", "effective", "intensity")
             if getattr(args, k) is not None]
    if given:
        raise RequestError(f"{', '.join(given)} set one light's blink; with several lights "
                           "put the blink in the phrase or the design file")
    if _chip_overrides(args):
        raise RequestError("--vt-plus, --vt-minus, --rout and --cross-current describe one "
                           "chip; they apply to a single light")
    if getattr(args, "trim", False):
        raise RequestError("--trim sizes one light's trimmer; run 'pulsepick solve' on one "
                           "light's phrase with --trim")
    context = _build_context(args)
    if getattr(args, "chip", None):
        import os

        context["chip"] = os.path.abspath(args.chip)
    if is_design_file(args.phrase):
        design = read_design(args.phrase)
        overrides = {k: v for k, v in context.items() if v is not None}
        for key in ("max_packages", "period_tolerance", "lock_margin", "max_lock_share"):
            if getattr(args, key) is not None:
                overrides[key] = getattr(args, key)
        if args.spread_out:
            overrides["spread_out"] = True
        if args.dusk_detector is not None:
            overrides["dusk_detector"] = args.dusk_detector
        return build_request(design, **overrides), design
    phrases = split_lights(args.phrase)
    if context.get("chip"):
        from pulsepick.commands.circuit_options import profile_overrides

        context["family"], context["chip_overrides"] = profile_overrides(
            context.pop("chip"), context.get("family"), {})
    return make_build_request(
        phrases, max_packages=args.max_packages,
        dusk_detector=True if args.dusk_detector is None else args.dusk_detector,
        lock_margin=args.lock_margin, spread_out=bool(args.spread_out),
        period_tolerance=args.period_tolerance, source=args.phrase,
        max_lock_share=args.max_lock_share,
        **{k: v for k, v in context.items() if v is not None}), None


class BuildRun(NamedTuple):
    """What a several-lights solve computed (before any output)."""

    result: Any  # BuildResult
    request: Any  # BuildRequest
    design: Any  # the design file, or None for a phrase
    extras: dict  # storage, panel, charge diode, clamp for the buy list
    night: Any  # the design file's night, or None
    advice: Any  # the clamp advice, or None
    offered: bool  # every light has a circuit and the package plan exists


def compute_build(args) -> BuildRun:
    """Check the options and solve several lights (a phrase or a design file)."""
    from pulsepick.commands.pictures import check_picture_targets
    from pulsepick.designfile import is_design_file
    from pulsepick.errors import RequestError
    from pulsepick.solve import solve_build
    from pulsepick.workers import on_workers

    design_path = args.phrase if is_design_file(args.phrase) else None
    for flag in ("storage", "night"):
        if getattr(args, flag, None) is not None:
            raise RequestError(f"--{flag} applies to one light; for several lights run "
                               "'pulsepick night' on the design file or the phrase")
    check_picture_targets(args, [args.stock, design_path], with_buylist=True)
    breq, design = build_request_from_args(args)
    if design is not None and design.stock_path:
        check_picture_targets(args, [design.stock_path], with_buylist=True)
    extras = _build_extras(design)
    from pulsepick.commands.design_night import design_clamp, design_night

    night = None if design is None else design_night(design)
    advice = design_clamp(design)
    if advice is not None and advice.proposed_clamp_v is not None:
        extras["clamp_v"] = advice.proposed_clamp_v
        extras["clamp_w"] = advice.proposed_clamp_w
    elif advice is not None and advice.clamp_v is not None and advice.clamp_needed:
        # the file's own clamp is a part of the build: it goes in the buy list too
        extras["clamp_v"] = advice.clamp_v
        extras["clamp_w"] = advice.clamp_v * advice.isc_a
    result = on_workers(solve_build, breq, jobs=args.jobs)
    offered = all(li.pick is not None for li in result.lights) and result.plan is not None
    return BuildRun(result, breq, design, extras, night, advice, offered)


def build_doc(run: BuildRun) -> dict:
    """The ``--json`` document of a several-lights solve."""
    night, advice = run.night, run.advice
    doc = build_json(run.result, **run.extras)
    doc["night"] = None if night is None else {
        "night_s": night.night_s, "given": night.given, "text": night.text,
        "note": night.note}
    if advice is not None:
        doc["clamp"] = {"v_possible_v": advice.v_possible_v, "v_rated_v": advice.v_rated_v,
                        "over": advice.over, "proposed_clamp_v": advice.proposed_clamp_v,
                        "proposed_clamp_w": advice.proposed_clamp_w}
        doc["cautions"] = list(advice.cautions) + doc["cautions"]
    return doc


def run_build(args) -> int:
    """Solve several lights, print the build report or JSON, write one buy list."""
    from pulsepick.output.render import dump_json, make_console

    done = compute_build(args)
    result, breq, extras, offered = done.result, done.request, done.extras, done.offered
    lines = build_lines(result, **extras) if offered else ()
    if args.buylist and offered:
        from pulsepick.output.export import write_atomic

        write_atomic(args.buylist, build_buylist_text(result, **extras), force=args.force)
    if args.json:
        dump_json(build_doc(done))
    else:
        render_build(make_console(), result, buylist=args.buylist if offered else None,
                     storage=extras.get("storage"), night=done.night,
                     cautions=() if done.advice is None else done.advice.cautions,
                     lines=lines)
    if not offered:
        _nothing_line(breq.describe(), list(result.warnings) or [result.message])
        return 2
    from pulsepick.commands.buildreport import build_pictures
    from pulsepick.commands.pictures import announce

    announce(args, build_pictures(args, result, lines, done.design))
    # offered, but over the lock share the request limits (--max-lock-share)
    return 0 if result.success else 3


def _build_extras(design) -> dict:
    """Storage, panel and charge diode of a design file, for the buy list."""
    from pulsepick.designfile import panel_part, storage_part

    if design is None:
        return {}
    out = {}
    if design.storage is not None:
        out["storage"] = storage_part(design)
    if design.panel is not None:
        out["panel"] = panel_part(design)
        diode = str(design.panel.get("diode", "schottky")).strip().lower()
        from pulsepick.errors import RequestError
        from pulsepick.parts.diode import DIODE_KEYS

        if diode not in DIODE_KEYS:
            raise RequestError(f"{design.path}: [panel] diode {diode!r} unknown; accepted: "
                               f"{', '.join(DIODE_KEYS)}")
        out["charge_diode"] = diode
    return out


def build_lines(result, *, storage=None, panel=None, charge_diode=None, clamp_v=None,
                clamp_w=None) -> tuple:
    """Every part of the build (``PartLine`` tuple), with the dusk holds' diodes, a
    decoupling capacitor per package and, when the panel can exceed the storage's rating,
    the proposed clamp."""
    from pulsepick.analysis.gating import hold_part_lines
    from pulsepick.analysis.multi import build_part_lines
    from pulsepick.partslist import charge_path_lines

    names = [li.name for li in result.lights]
    holds = () if result.gating is None else hold_part_lines(result.gating, names)
    # each light's parts carry the build's designators (a photoresistor network in place
    # of its timing resistor): the buy list numbers them the same way
    own = [li.pick.parts for li in result.lights]
    lines = build_part_lines(names, own, result.plan, storage=storage, panel=panel,
                             charge_diode=charge_diode, hold_lines=holds)
    return lines + charge_path_lines(lines, result.plan, clamp_v=clamp_v, clamp_w=clamp_w)


def build_buylist_text(result, **extras) -> str:
    """One buy list (CSV) for the whole build, identical parts summed across the lights
    (see :func:`pulsepick.output.export.build_buylist_text`)."""
    from pulsepick.output import export

    return export.build_buylist_text(result, build_lines(result, **extras))


def _rate_json(names, lr, night_period_s: float, night_lux: float) -> dict:
    """A photoresistor light (pulsepick.packing.LightRate) as plain data."""
    net, rate = lr.clamp.network, lr.rate
    per = rate.period_s["typ"]
    return {"light": names[lr.light], "photoresistor": lr.key,
            "night_lux": night_lux, "night_period_s": night_period_s,
            "series_ohm": net.series_ohm,
            "parallel_ohm": None if net.parallel_ohm == float("inf") else net.parallel_ohm,
            "lux": [float(x) for x in rate.lux], "period_typ_s": [float(x) for x in per],
            "period_range_s": list(rate.period_range_s or ()),
            "within_range": rate.within_range}


def _gating_json(names, gating) -> dict | None:
    """The dusk gating (pulsepick.analysis.gating.BuildGating) as plain data."""
    if gating is None:
        return None
    return {"arrangement": gating.arrangement, "detector_gates": gating.detector_gates,
            "hold_diode": gating.diode, "held_supply_a": gating.held_a,
            "held_supply_end_a": gating.held_end_a,
            "lights": [{"name": names[h.light], "hold": h.kind, "held_supply_a": h.held_a,
                        "held_supply_end_a": h.held_end_a, "node_v": h.node_v,
                        "limit_v": h.limit_v, "holds": h.holds} for h in gating.holds]}


def build_json(result, **extras) -> dict:
    """The whole build as plain JSON data."""
    from pulsepick import __version__
    from pulsepick.output.export import candidate_json, solve_cautions
    from pulsepick.packing import night_lux
    from pulsepick.output.render import word_hints

    breq = result.request
    names = [li.name for li in result.lights]
    plan = result.plan
    out = {
        "pulsepick": __version__,
        "build": breq.describe(),
        "success": result.success,
        "message": result.message,
        "lock_margin": breq.lock_margin,
        "spread_out": breq.spread_out,
        "period_tolerance": breq.period_tolerance,
        "max_packages": breq.max_packages,
        "lights": [{
            "name": li.name, "request": lr.request.to_dict(), "asked_period_s": li.asked_s,
            "moved": li.moved,
            "circuit": None if li.pick is None else candidate_json(li.pick),
            "explanations": list(li.result.explanations),
        } for li, lr in zip(result.lights, breq.lights, strict=True)],
        "packages": None if plan is None else [
            {"ref": f"U{p.number}", "family": p.family, "gates_used": p.gates_used,
             "lights": [names[i] for i in p.lights], "dusk_detector": p.dusk}
            for p in plan.packages],
        "gates": None if plan is None else {
            "oscillators": plan.oscillators, "buffers": plan.buffers, "dusk": plan.dusk,
            "needed": plan.gates_needed, "timers": plan.timers, "count": plan.describe()},
        "lock_risks": [_risk_json(names, r) for r in result.risks],
        "lock_share": _share_json(names, result.lock_share),
        "lock_grade": None if result.lock_share is None else
        _lock_grade(result.lock_share.share),
        "max_lock_share": breq.max_lock_share,
        "lock_share_before_spread_out": _share_json(names, result.lock_share_before),
        "lock_remedies": [{"action": r.action, "lock_share": r.share,
                           "option": word_hints(r.option) if r.option else ""}
                          for r in result.remedies],
        "lock_risks_before_spread_out": None if result.risks_before is None else
        [_risk_json(names, r) for r in result.risks_before],
        "total_supply_avg_a": result.total_supply_a,
        "dusk_gating": _gating_json(names, result.gating),
        "light_rates": [_rate_json(names, r, float(result.lights[r.light].pick.figures[
            "period_s"]), night_lux(breq)) for r in (result.rates or {}).values()],
        "warnings": list(result.warnings),
        "cautions": list(solve_cautions(breq, storage="storage" in extras)),
    }
    if plan is not None and all(li.pick is not None for li in result.lights):
        out["parts"] = [p.to_dict() for p in build_lines(result, **extras)]
    return out
