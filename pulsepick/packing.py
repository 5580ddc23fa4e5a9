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

import numpy as np

from pulsepick.errors import RequestError
from pulsepick.hints import Hint, hint
from pulsepick.request import FAMILY_CHOICES, SolveRequest

#: The remedy that spreads the periods out (offered only when they are not already).
SPREAD_OUT = Hint("spread_out", True)
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
        if covering and defaulted:
            note = (f"{ranges}, not the whole supply range ({span}); the lights use "
                    f"{covering[0]}, which does ({hint('family', covering[0])})")
        elif covering:
            note = (f"{ranges}, not the whole supply range ({span}); {covering[0]} does "
                    f"({hint('family', covering[0])})")
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


def solve_lights(breq, solve_fn, *, runner=None):
    """Solve every light of ``breq`` for one shared package family, 555s only where needed.

    Returns ``(results, notes)``: one ``SolveResult`` per light and the notes for the
    build's warnings. ``solve_fn(request, runner=...)`` is the single-light solver (``runner``: see
    :mod:`pulsepick.runner`). The
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
            res = solve_fn(sub, runner=runner) if sub is not None else None
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
        res = solve_fn(sub if sub is not None else li.request, runner=runner)
        if sub is not None and not res.success:
            res = solve_fn(li.request, runner=runner)
        results[i] = res
        if best is not None and i in want and res.success:
            notes.append(f"{li.name} cannot be met on the shared {best[1]} package; it "
                         "runs on its own CMOS 555")
    return results, notes


# ============================================================================ lock share

def build_lock_share(breq, picks, groups, *, seed: int = 0, designs=None):
    """The lock share of the chosen circuits (:func:`pulsepick.analysis.lock.lock_share`),
    over the night's supply range and each pick's resistor tolerances, as they run at
    night (``designs``, default :func:`night_designs`)."""
    from pulsepick.analysis.lock import lock_share

    req = breq.lights[0].request
    lo, hi = supply_span(req)
    if designs is None:
        designs = night_designs(breq, picks)
    return lock_share(list(designs), groups, seed=seed, margin=breq.lock_margin,
                      supply_range_v=(lo, hi) if hi > lo else None,
                      resistor_tol_pct=[_r_tols(c) for c in picks])


def _r_tols(c):
    tols = {p.param: p.tolerance_pct for p in c.parts if p.kind == "resistor"}
    return tols or None


def lock_remedies(breq, picks, groups, share, options_fn, *, seed: int = 0,
                  designs=None) -> tuple:
    """Ways to lower the lock share, ranked by the share each leaves (those that do not
    lower it left out).

    ``options_fn(i, tolerance)`` gives light ``i``'s standard-value variants
    (:class:`pulsepick.analysis.multi.PeriodOptions`) within ``tolerance`` of its period
    asked. Tighter parts re-run the Monte Carlo with 1 % resistors and 5 % capacitors; a
    wider period tolerance (twice the one given) and the spread-out search rescale the
    builds; a separate package moves the light in the most near-lock builds to its own.
    A trimmer on each light that shares a package with another, set at the bench to its
    period (:mod:`pulsepick.analysis.locktrim`), leaves the setting resolution and what
    the supply and temperature move afterwards.
    """
    from pulsepick.analysis.lock import (
        TIGHT_CAP_PCT,
        TIGHT_RESISTOR_PCT,
        Remedy,
        lock_share,
        minimise_share,
        rank_remedies,
        share_of,
    )

    if share.share <= 0:
        return ()
    req = breq.lights[0].request
    lo, hi = supply_span(req)
    if designs is None:
        designs = night_designs(breq, picks)
    scale = night_scales(picks, designs)
    out = []
    tight = lock_share(list(designs), groups, seed=seed, margin=breq.lock_margin,
                       supply_range_v=(lo, hi) if hi > lo else None,
                       resistor_tol_pct=[TIGHT_RESISTOR_PCT] * len(picks),
                       cap_tol=TIGHT_CAP_PCT)
    out.append(Remedy(f"tighter timing parts ({TIGHT_RESISTOR_PCT:g} % resistors, "
                      f"{TIGHT_CAP_PCT:g} % capacitors)", tight.share, Hint("series", "E96")))
    periods = [float(c.figures["period_s"]) * k for c, k in zip(picks, scale, strict=True)]
    asked = [li.request.targets.period_s * k for li, k in zip(breq.lights, scale, strict=True)]
    wider = min(0.5, 2 * breq.period_tolerance)
    for tol, words, opt in (
            (breq.period_tolerance, f"spread the periods out within {breq.period_tolerance:.0%}",
             SPREAD_OUT),
            (wider, f"a wider period tolerance ({wider:.0%}) for the spread-out search",
             Hint("period_tolerance", f"{wider:.0%}"))):
        if opt == SPREAD_OUT and breq.spread_out:
            continue
        try:
            opts = [options_fn(i, tol).periods_s * scale[i] for i in range(len(picks))]
            _, res = minimise_share(asked, opts, share, periods, groups)
        except RequestError:  # a light without variants: no remedy of this kind
            continue
        out.append(Remedy(words, res.share, opt))
    trim = _trim_remedy(breq, picks, groups, share, designs)
    if trim is not None:
        out.append(trim)
    worst = max(range(len(picks)), key=lambda i: sum(p.share for p in share.pairs
                                                     if i in (p.a, p.b)))
    alone = [g if i != worst else max(groups) + 1 for i, g in enumerate(groups)]
    sep = share_of(periods, share.log_dev, alone, margin=share.margin, max_q=share.max_q)
    # no option asks for it: the packer fills as few packages as it can
    out.append(Remedy(f"{breq.lights[worst].name} on a package of its own (by hand)",
                      sep.share, None))
    # only what lowers the share is a remedy
    return rank_remedies([r for r in out if r.share < share.share])


def build_verdict(breq, n_lights: int, n_packages: int, share, *, spread: bool
                  ) -> tuple[bool, str]:
    """Success and the one-line verdict of a build.

    A lock share is a risk graded by :func:`pulsepick.analysis.lock.lock_grade`, not a
    failure of the solve; it decides success only against the limit the request asks
    (``breq.max_lock_share``).
    """
    from pulsepick.analysis.lock import lock_grade

    limit = breq.max_lock_share
    ok = limit is None or share.share <= limit
    message = f"{n_lights} lights on {n_packages} package{'s' if n_packages != 1 else ''}"
    if spread:
        message += "; periods spread out"
    if share.share > 0:
        message += (f"; lock risk {lock_grade(share.share)}: {share.share:.1%} of builds "
                    "have a pair near a lock")
    else:
        message += "; no build has a pair near a lock"
    if limit is not None:
        message += (f", within the {limit:.1%} limit asked" if ok else
                    f", above the {limit:.1%} limit asked ({hint('max_lock_share')})")
    return ok, message


def _trim_remedy(breq, picks, groups, share, designs):
    """The trimmer remedy (``Remedy``), or None when no light sharing a package can have
    a trimmer covering its builds."""
    from pulsepick.analysis.lock import Remedy
    from pulsepick.analysis.locktrim import TRIM_SETTING_RESOLUTION, trimmed_share

    shared = {g for g in groups if list(groups).count(g) > 1}
    # a photoresistor light's period resistor is the photoresistor: no trimmer there
    wanted = [groups[i] in shared and not c.design.chip.is_timer and designs[i] is c.design
              for i, c in enumerate(picks)]
    if not any(wanted):
        return None
    res, trims = trimmed_share(list(designs), groups, share, wanted,
                               [li.request.r_series for li in breq.lights],
                               resistor_tol_pct=[_r_tols(c) for c in picks])
    if not any(t is not None for t in trims):
        return None
    return Remedy(f"a trimmer per light, each set on the bench to within "
                  f"{TRIM_SETTING_RESOLUTION:.0%} of its travel", res.share, Hint("trim", True))


def share_text(names, pair, margin: float, spread_out: bool, share: float,
               n_pairs: int) -> str:
    """The lock warning: the grade, the pair most often near a lock and the build's share."""
    from pulsepick.analysis.lock import lock_grade

    head = (f"lock risk {lock_grade(share)}: "
            f"{names[pair.a]} and {names[pair.b]} on one package come within "
            f"{margin:.0%} of {pair.nearest} in {pair.share:.1%} of builds")
    if n_pairs > 1:
        head += f" (any pair: {share:.1%})"
    return head + ("; the periods are already spread out" if spread_out else
                   "; they may pull into step")


def remedies_text(remedies, spread_out: bool) -> str | None:
    """One line: the remedies, from the one leaving the least lock share."""
    offered = [r for r in remedies if not (spread_out and r.option == SPREAD_OUT)]
    if not offered:
        return None
    return "to lower the share of builds near a lock, best first: " + "; ".join(
        f"{r.action}: {r.share:.1%}" + (f" ({r.option})" if r.option else "")
        for r in offered)


# ============================================================================ light-set rates

#: The rate range a photoresistor light is clamped to, as fractions of the period asked
#: (the period in the dark): twice as fast in bright light at most, 15 % slower at the dark
#: corner (design choice).
LDR_FASTEST, LDR_SLOWEST = 0.5, 1.15


@dataclass(frozen=True)
class LightRate:
    """A light whose rate is set by a photoresistor in place of its timing resistor."""

    light: int  # light index
    key: str  # photoresistor key
    clamp: object  # ClampResult (pulsepick.analysis.ldr)
    rate: object  # LdrResult: period against light at the photoresistor's corners


def light_rates(breq, picks) -> dict[int, LightRate]:
    """The photoresistor network of every light that names one (see ``LDR_FASTEST``).

    The network gives the pick's period at :func:`night_lux` (typical photoresistor, the
    pick's switching levels) within ``NIGHT_FIT`` where a clamp pair can, and keeps every
    corner within the bounds over the light range."""
    from pulsepick.analysis.ldr import ldr_rate, solve_clamp
    from pulsepick.parts.photoresistor import get_photoresistor

    out = {}
    lux = night_lux(breq)
    for i, key in enumerate(breq.photoresistors):
        if not key or i >= len(picks):
            continue
        design = picks[i].design
        levels = _levels(picks[i])
        asked = breq.lights[i].request.targets.period_s
        bounds = (LDR_FASTEST * asked, LDR_SLOWEST * asked)
        clamp = solve_clamp(design, get_photoresistor(key), bounds,
                            series=breq.lights[i].request.r_series,
                            night=(lux, float(picks[i].figures["period_s"])), levels=levels)
        out[i] = LightRate(i, key, clamp, ldr_rate(design, clamp.network,
                                                   period_range_s=bounds, levels=levels))
    return out


def _levels(c) -> dict:
    """The switching levels a pick's figures use (the median chip aimed at), as keywords."""
    from pulsepick.design import levels_kw

    return levels_kw(getattr(c, "aim_levels_v", None))


def night_values(rates: dict, picks, lux: float) -> dict[int, dict]:
    """Per photoresistor light, its values with the timing resistance the network has at
    ``lux`` (typical photoresistor): the light as it runs at night."""
    from pulsepick.analysis.ldr import timing_param

    out = {}
    for i, lr in rates.items():
        d = picks[i].design
        out[i] = {**d.values, timing_param(d): float(lr.clamp.network.resistance(lux, "typ"))}
    return out


def rate_part_lines(rate: LightRate, param_lines) -> tuple:
    """The light's own part lines with its timing resistor replaced by the photoresistor
    and its clamp resistors (``PartLine``)."""
    from dataclasses import replace as _replace

    from pulsepick.analysis.ldr import timing_param
    from pulsepick.partslist import PartLine
    from pulsepick.units import format_eng, format_rkm

    net = rate.clamp.network
    name = timing_param(rate.rate.design)
    out = []
    for line in param_lines:
        if line.param != name:
            out.append(line)
            continue
        out.append(PartLine(
            ref="LDR", kind="photoresistor", value=None, unit="", display=net.ldr.name,
            code=rate.key, series="", tolerance="", tolerance_pct=None, dielectric="",
            rating="", role="photoresistor in place of the timing resistor: the rate "
            "follows the light", param=name, note="keep it shaded from the light's own LED"))
        for what, value in (("series", net.series_ohm), ("parallel", net.parallel_ohm)):
            if 0 < value < float("inf"):
                out.append(_replace(line, value=value, display=format_eng(value, "Ω"),
                                    code=format_rkm(value, "R"), param=f"{name}_{what}",
                                    role=f"{what} clamp resistor of the photoresistor"))
    return tuple(out)


#: Light level by day at which a photoresistor light's held draw is taken, lux: an
#: overcast day in the shade of a handrail (estimate; brighter light lowers the
#: photoresistor further, down to its series clamp).
DAY_LUX = 100.0


#: Light level at night at which a photoresistor light's period and draw are taken, lux,
#: when the design file gives none (``[build] night_lux``): the darkest level of the
#: light range the photoresistor analysis shows, a moonless night (estimate). A brighter
#: night quickens the light (``pulsepick ldr`` shows its period against light).
NIGHT_LUX = 0.01


def night_lux(breq) -> float:
    """The night's light level for the build's photoresistor lights, lux."""
    given = getattr(breq, "night_lux", None)
    return NIGHT_LUX if given is None else float(given)


def night_designs(breq, picks, rates=None) -> list:
    """The circuits as they run at night: a photoresistor light's timing resistance at
    :func:`night_lux` (its clamps included, typical photoresistor), the others as chosen.
    ``rates`` default :func:`light_rates`."""
    from pulsepick.analysis.ldr import with_network_value

    if not breq.photoresistors:
        return [c.design for c in picks]
    rates = light_rates(breq, picks) if rates is None else rates
    lux = night_lux(breq)
    return [with_network_value(c.design, rates[i].clamp.network, lux) if i in rates
            else c.design for i, c in enumerate(picks)]


def night_scales(picks, designs) -> list[float]:
    """Per light, its period at night over its chosen nominal period (1 for the lights
    without a photoresistor): the standard-value variants of a photoresistor light move
    its night period in the same proportion (estimate)."""
    out = []
    for c, d in zip(picks, designs, strict=True):
        if d is c.design:
            out.append(1.0)
            continue
        p = float(np.ravel(d.fast(**_levels(c)).period_s)[0])
        out.append(p / float(c.figures["period_s"]) if np.isfinite(p) and p > 0 else 1.0)
    return out


def held_designs(picks, rates) -> list:
    """The circuits as they stand by day: a photoresistor light's timing resistance at
    ``DAY_LUX`` (its clamps included), the others as chosen."""
    from pulsepick.analysis.ldr import with_network_value

    return [with_network_value(c.design, rates[i].clamp.network, DAY_LUX) if i in rates
            else c.design for i, c in enumerate(picks)]


__all__ = [
    "DAY_LUX",
    "LDR_FASTEST",
    "LDR_SLOWEST",
    "NIGHT_LUX",
    "SCHMITT_FAMILIES",
    "FamilyPlan",
    "LightRate",
    "build_lock_share",
    "build_verdict",
    "covers",
    "families_covering",
    "family_plan",
    "held_designs",
    "light_rates",
    "lock_remedies",
    "night_designs",
    "night_lux",
    "night_scales",
    "night_values",
    "on_family",
    "on_timer",
    "packable",
    "rate_part_lines",
    "remedies_text",
    "share_text",
    "solve_lights",
    "supply_span",
]
