"""Which chip family a whole build shares, so its lights go on as few packages as they can.

A build's lights share one supply. A hex Schmitt package holds six gates (common practice),
so several lights, the dusk detector and its gating gates fit one package when they share
a logic family. A CMOS 555 is one package per light, so it is used only when a light cannot
be met on the shared package, or when the request allows no logic family
(``--family timer555``).

The family is chosen over the whole supply range of the night (from full down to the end
of the night): a family whose recommended supply range does not cover it stops or runs out
of specification before dawn (datasheet supply range, ``data/parts/logic_families.csv``).
With the family left at its default, the families that cover the range are tried in the
order of :data:`pulsepick.request.FAMILY_CHOICES`; with a family given, it is used as given
and a note names the family that does cover the range.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from pulsepick.request import FAMILY_CHOICES, SolveRequest

#: The logic families a light can share a package on (every family key but the 555).
SCHMITT_FAMILIES = tuple(f for f in FAMILY_CHOICES if f not in ("timer555", "any"))


def supply_span(req: SolveRequest) -> tuple[float, float]:
    """The lowest and highest supply (V) the build runs at over the night."""
    end = req.supply_end_v if req.supply_end_v is not None else req.supply_v
    return min(end, req.supply_v), req.supply_v


def covers(family: str, lo_v: float, hi_v: float) -> bool:
    """True when ``family``'s recommended supply range holds ``lo_v``..``hi_v`` (V)."""
    from pulsepick.engine.environment import ChipSpec, chip_model

    model = chip_model(ChipSpec(family=family))
    return bool(model.in_range(lo_v)) and bool(model.in_range(hi_v))


def families_covering(lo_v: float, hi_v: float) -> tuple[str, ...]:
    """The logic families whose supply range holds ``lo_v``..``hi_v`` (V), in order."""
    return tuple(f for f in SCHMITT_FAMILIES if covers(f, lo_v, hi_v))


@dataclass(frozen=True)
class FamilyPlan:
    """The Schmitt families to try for the shared package, best first."""

    order: tuple[str, ...]  # families to try, those covering the supply range first
    covering: tuple[str, ...]  # every logic family covering the supply range
    given: tuple[str, ...]  # the Schmitt families the request named (or allowed by default)
    defaulted: bool  # the family was left at its default
    lo_v: float  # V, lowest supply of the night
    hi_v: float  # V, full supply
    note: str | None  # a family given cannot run over the range: which one can


def family_plan(req: SolveRequest) -> FamilyPlan:
    """The order in which the build's shared package family is tried (see module doc)."""
    from pulsepick.engine.environment import ChipSpec, chip_model

    lo, hi = supply_span(req)
    given = tuple(f for f in req.families if f != "timer555")
    defaulted = "family" in req.defaults
    covering = families_covering(lo, hi)
    pool = list(dict.fromkeys([*given, *(SCHMITT_FAMILIES if defaulted else ())]))
    first = [f for f in pool if f in covering]
    # a family that runs at the full supply but not to the end of the night comes last
    rest = [f for f in given if f not in covering
            and bool(chip_model(ChipSpec(family=f)).in_range(hi))]
    note = None
    if given and not any(f in covering for f in given):
        ranges = ", ".join(f"{f} runs {m.vdd_min_v:g}-{m.vdd_max_v:g} V" for f, m in
                           ((f, chip_model(ChipSpec(family=f))) for f in given))
        span = f"{hi:g} V down to {lo:g} V"
        if covering:
            note = (f"{ranges}, not the whole supply range ({span}); {covering[0]} does "
                    f"(--family {covering[0]})")
        else:
            note = (f"{ranges}, not the whole supply range ({span}), and no logic family "
                    "covers it; narrow the supply range or use the CMOS 555")
    order = tuple(dict.fromkeys([*first, *rest]))
    return FamilyPlan(order=order, covering=covering, given=given, defaulted=defaulted,
                      lo_v=lo, hi_v=hi, note=note)


def on_family(req: SolveRequest, family: str) -> SolveRequest | None:
    """``req`` searching only ``family`` with the Schmitt cores (None: no such core)."""
    cores = tuple(c for c in req.cores if c != "timer555")
    if not cores:
        return None
    return replace(req, families=(family,), cores=cores)


def on_timer(req: SolveRequest) -> SolveRequest | None:
    """``req`` searching only the CMOS 555 (None: the request does not allow it)."""
    if "timer555" not in req.families or "timer555" not in req.cores:
        return None
    return replace(req, families=("timer555",), cores=("timer555",))


def packable(req: SolveRequest) -> bool:
    """True when the light may go on a shared Schmitt package."""
    return any(f != "timer555" for f in req.families) and any(
        c != "timer555" for c in req.cores)


def solve_lights(breq, solve_fn, *, jobs: int = 1):
    """Solve every light of ``breq`` for one shared package family, 555s only where needed.

    Returns ``(results, notes)``: one ``SolveResult`` per light and the notes for the
    build's warnings. ``solve_fn(request, jobs=...)`` is the single-light solver. The
    families of :func:`family_plan` are tried in turn; the first on which every packable
    light is met is used, else the one meeting the most. A light not met there (or not
    allowed a logic family) is solved on the CMOS 555 when its request allows one.
    """
    lights = list(breq.lights)
    plan = family_plan(lights[0].request)
    notes = [plan.note] if plan.note else []
    results: list = [None] * len(lights)
    want = [i for i, li in enumerate(lights) if packable(li.request)]
    best: tuple[int, str, dict] | None = None
    for family in plan.order:
        got = {}
        for i in want:
            sub = on_family(lights[i].request, family)
            res = solve_fn(sub, jobs=jobs) if sub is not None else None
            if res is not None and res.success:
                got[i] = res
        if best is None or len(got) > best[0]:
            best = (len(got), family, got)
        if len(got) == len(want):
            break
    if best is not None:
        for i, res in best[2].items():
            results[i] = res
    for i, li in enumerate(lights):
        if results[i] is not None:
            continue
        sub = on_timer(li.request)
        res = solve_fn(sub if sub is not None else li.request, jobs=jobs)
        if sub is not None and not res.success:
            res = solve_fn(li.request, jobs=jobs)
        results[i] = res
        if best is not None and i in want and res.success:
            notes.append(f"{li.name} cannot be met on the shared {best[1]} package; it "
                         "runs on its own CMOS 555")
    return results, notes


__all__ = ["FamilyPlan", "SCHMITT_FAMILIES", "covers", "families_covering", "family_plan",
           "on_family", "on_timer", "packable", "solve_lights", "supply_span"]
