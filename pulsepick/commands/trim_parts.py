"""``solve --trim``: put a fixed resistor plus a trimmer in each candidate's parts list.

The core sizes the trimmer (:func:`pulsepick.analysis.trim.trim_plan`); this shell
module swaps the period-setting resistor's line for the fixed part and the trimmer
(with its setting range), renders the yield after trimming, and adds a ``trim`` entry
to the JSON.
"""

from __future__ import annotations

import dataclasses

from pulsepick.analysis.trim import TrimPlan, trim_plan
from pulsepick.units import format_eng, format_rkm


def trim_result(result, series: str):
    """``(result with trimmed parts lists, {rank: TrimPlan})`` for assessed candidates."""
    plans: dict[int, TrimPlan] = {}
    cands = []
    for c in result.candidates:
        plan = None
        if c.spread is not None and c.spread.samples:
            plan = trim_plan(c.design, c.spread, result.request.targets.period_s, series,
                             yield_band=c.spread.yield_band)
        if plan is None:
            cands.append(c)
            continue
        ref = next((p.ref for p in c.parts if p.param == plan.param), plan.param.upper())
        plan = dataclasses.replace(plan, ref=ref)
        plans[c.rank] = plan
        cands.append(dataclasses.replace(c, parts=_parts(c.parts, plan)))
    return result.with_candidates(tuple(cands)), plans


def _parts(parts, plan: TrimPlan) -> tuple:
    out = []
    lo, hi = plan.needed_range_ohm
    for p in parts:
        if p.param != plan.param:
            out.append(p)
            continue
        out.append(dataclasses.replace(
            p, value=plan.fixed_ohm, display=format_eng(plan.fixed_ohm, "Ω"),
            code=format_rkm(plan.fixed_ohm, "R"), role=f"{p.role}, fixed part",
            note=f"in series with trimmer RV{p.ref[1:]}"))
        out.append(dataclasses.replace(
            p, ref=f"RV{p.ref[1:]}", kind="trimmer", value=plan.trimmer_ohm,
            display=format_eng(plan.trimmer_ohm, "Ω"), code=format_rkm(plan.trimmer_ohm, "R"),
            series="1-2-5", tolerance="", tolerance_pct=None, rating="",
            role=f"{p.role}, trimmer",
            note=(f"set to {format_eng(plan.setting_ohm, 'Ω')} for a typical build; the "
                  f"P5..P95 builds need {format_eng(lo - plan.fixed_ohm, 'Ω')} .. "
                  f"{format_eng(hi - plan.fixed_ohm, 'Ω')}; {plan.note}")))
    return tuple(out)


def trim_json(plan: TrimPlan | None) -> dict | None:
    if plan is None:
        return None
    return {"part": plan.param, "ref": plan.ref, "fixed_ohm": plan.fixed_ohm, "trimmer_ohm": plan.trimmer_ohm,
            "needed_range_ohm": list(plan.needed_range_ohm), "setting_ohm": plan.setting_ohm,
            "yield_untrimmed": plan.yield_before, "yield_trimmed": plan.yield_after,
            "note": plan.note}


def add_trim_json(out: dict, plans: dict[int, TrimPlan]) -> dict:
    for cand in out.get("candidates", []):
        cand["trim"] = trim_json(plans.get(cand["rank"]))
    return out


def render_trim(console, plans: dict[int, TrimPlan]) -> None:
    from pulsepick.output.render import print_wrapped

    console.print("[bold]Trimmers[/bold] (--trim)")
    if not plans:
        print_wrapped(console, "no candidate has a spread to size a trimmer from")
        return
    for rank, p in sorted(plans.items()):
        lo, hi = p.needed_range_ohm
        print_wrapped(console, (
            f"#{rank}: {p.ref} ({p.param.upper()}) becomes {format_eng(p.fixed_ohm, 'Ω')} fixed + "
            f"{format_eng(p.trimmer_ohm, 'Ω')} trimmer; the P5..P95 builds need "
            f"{format_eng(lo, 'Ω')} .. {format_eng(hi, 'Ω')} in total, the typical build "
            f"{format_eng(p.fixed_ohm + p.setting_ohm, 'Ω')} "
            f"({p.setting_ohm / p.trimmer_ohm:.0%} of the travel); builds within the period "
            f"band: {p.yield_before:.0%} untrimmed; builds the trimmer brings to the target: "
            f"{p.yield_after:.0%}"))
    print_wrapped(console, plans[min(plans)].note)
