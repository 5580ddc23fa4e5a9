"""The terminal report of a several-lights ``pulsepick solve``.

One summary screen (the lights, the packages, the lock risk, spread-out periods, dusk
gating, the energy budget, warnings and the verdict), then one screen per light with its
parts, then the cautions.
"""

from __future__ import annotations

from pulsepick.commands.solve_lock import render_lock_risks
from pulsepick.commands.solve_text import _eng, _render_cautions


def render_build(console, result, *, buylist: str | None = None, storage=None,
                 night=None, cautions=(), lines=()) -> None:
    """The terminal report of a several-lights build (readable at 100 columns).

    ``storage``: the build's storage part (:class:`pulsepick.parts.storage.Storage`; the
    supercapacitor caution applies, and the energy budget sets the night against it), or
    None.
    ``night``: the design file's night (:class:`pulsepick.commands.design_night.DesignNight`).
    ``cautions``: cautions of the charge path (over-voltage and the proposed clamp).
    ``lines``: the build's parts (``PartLine``, as the buy list numbers them); each light's
    screen adds the build parts that serve it alone (its dusk hold diode).
    """
    from pulsepick.output.export import solve_cautions
    from pulsepick.output.render import print_wrapped

    breq = result.request
    has_storage = storage is not None
    names = [li.name for li in result.lights]
    console.print(f"[bold]pulsepick solve[/bold]: {breq.describe()}", highlight=False)
    console.print()
    _render_lights_table(console, result)
    if result.plan is None:
        console.print(f"[bold]{result.message}[/bold]", highlight=False)
        for w in result.warnings:
            print_wrapped(console, w, indent="  - ", hang="    ")
        console.print()
        _render_cautions(console, (*cautions, *solve_cautions(breq, storage=has_storage)))
        return
    _render_packages(console, result.plan, names)
    render_lock_risks(console, result, names)
    _render_plan_notes(console, result)
    _render_energy(console, result, night, storage)
    # the summary screen ends with the warnings and the verdict; then one screen per light
    if result.warnings:
        console.print("[bold]Warnings[/bold]")
        for w in result.warnings:
            print_wrapped(console, w, indent="  ! ", hang="    ")
        console.print()
    console.print(f"[bold]{result.message}[/bold]", highlight=False)
    console.print()
    _render_light_screens(console, result, lines)
    if buylist:
        console.print(f"Buy list of the whole build written to {buylist}", markup=False)
        console.print()
    _render_cautions(console, (*cautions, *solve_cautions(breq, storage=has_storage)))


def _render_lights_table(console, result) -> None:
    """One row per light: asked and offered period (the median of its builds where they
    were run, as in the ranking of one light), circuit, chip, flash, peak, supply."""
    from pulsepick.commands.solve_summary import _spread
    from pulsepick.output.render import simple_table

    rows = []
    medians = False
    for li in result.lights:
        c = li.pick
        if c is None:
            rows.append([li.name, _eng(li.asked_s, "s"), "nothing offered", "", "", "", "",
                         ""])
            continue
        f = c.figures
        median = _spread(c)[0]
        medians = medians or median is not None
        rows.append([li.name, _eng(li.asked_s, "s"), c.design.topo.label(),
                     c.design.chip.family, _eng(f["period_s"] if median is None else median,
                                                "s")
                     + (" *" if li.moved else ""), _eng(f["flash_s"], "s"),
                     _eng(f["led_peak_a"], "A"), _eng(f["supply_avg_a"], "A")])
    notes = (["period: the median of the builds"] if medians else []) + (
        ["* period moved by --spread-out"] if any(li.moved for li in result.lights) else [])
    console.print(simple_table(
        "Lights" + (f" ({'; '.join(notes)})" if notes else ""),
        ["light", "asked", "circuit", "chip", "period", "flash", "peak", "supply"], rows,
        justify=["left", "right", "left", "left", "right", "right", "right", "right"]))


def _render_packages(console, plan, names) -> None:
    """The packages and the gates each one uses."""
    from pulsepick.output.render import print_wrapped

    console.print("[bold]Packages[/bold]")
    print_wrapped(console, f"{plan.describe()}: {len(plan.packages)} package"
                           f"{'s' if len(plan.packages) != 1 else ''}")
    for p in plan.packages:
        who = ", ".join(names[i] for i in p.lights) or "-"
        extra = " + dusk detector" if p.dusk else ""
        print_wrapped(console, f"U{p.number} {p.family}: {p.gates_used} gate"
                               f"{'s' if p.gates_used != 1 else ''} ({who}{extra})")
    console.print()


def _render_plan_notes(console, result) -> None:
    """The periods --spread-out moved and the dusk gating, when there are any."""
    from pulsepick.output.render import print_wrapped

    if result.spread_out is not None:
        so = result.spread_out
        console.print("[bold]Spread-out periods[/bold] (* in the table of lights)")
        print_wrapped(console, so.message)
        console.print()
    if result.gating is not None:
        g = result.gating
        console.print(f"[bold]Dusk gating[/bold] ({g.detector_gates} gate"
                      f"{'s' if g.detector_gates != 1 else ''})", highlight=False)
        print_wrapped(console, g.arrangement)
        console.print()


def _render_energy(console, result, night, storage=None) -> None:
    """The energy budget of all lights over the night, set against the storage's charge
    when the build names one."""
    from pulsepick.output.render import print_wrapped
    from pulsepick.solve.nightcheck import DEFAULT_NIGHT_S

    console.print("[bold]Energy budget[/bold]")
    night_s = DEFAULT_NIGHT_S if night is None else night.night_s
    need_c = result.total_supply_a * night_s
    night_words = f"a {night_s / 3600:g} h night" if night is None else f"the {night.text}"
    held = ("" if result.gating is None else
            f" (held by day: {_eng(result.gating.held_a, 'A')} and the chips' quiescent "
            "current)")
    print_wrapped(console, f"all lights draw {_eng(result.total_supply_a, 'A')} on average at "
                           f"the design supply, {_eng(need_c, 'C')} over {night_words}{held}; "
                           + storage_budget_text(result, storage, need_c))
    if night is not None and night.note:
        print_wrapped(console, night.note)
    console.print()


def storage_budget_text(result, storage, need_c: float) -> str:
    """The storage's charge between the build's start and stop supplies against what the
    night needs at the design supply's draw (an estimate: the draw falls with the
    voltage); where to run the night without a storage or a supply range."""
    req = result.request.lights[0].request
    if storage is None or req.supply_end_v is None or not need_c > 0:
        return "'pulsepick night' runs the storage through the night"
    have_c = storage.capacitance_f * (req.supply_v - req.supply_end_v)
    share = have_c / need_c
    verdict = "enough" if share >= 1 else f"{share:.0%} of that"
    return (f"the {_eng(storage.capacitance_f, 'F')} storage gives {_eng(have_c, 'C')} from "
            f"{req.supply_v:.2f} V to {req.supply_end_v:.2f} V, {verdict} (estimate at the "
            "full-supply draw): 'pulsepick night' runs it" + ("" if share >= 1 else
                                                              ", --size sizes it"))


def _render_light_screens(console, result, lines=()) -> None:
    """One screen per light: its parts (a photoresistor network in place of the timing
    resistor when the light sets the rate; the build parts that serve it alone, such as
    its dusk hold diode, from ``lines``), notes and warnings."""
    from pulsepick.output.render import print_wrapped, simple_table
    from pulsepick.packing import night_lux

    rates = result.rates or {}
    for i, li in enumerate(result.lights):
        c = li.pick
        console.print(f"[bold]{li.name}[/bold]: {c.design.topo.label()} on "
                      f"{c.design.chip.family}, {c.design.supply_v:g} V", highlight=False)
        own = c.parts
        prow = [[p.ref, p.display, p.code, p.tolerance, p.dielectric or "-", p.role]
                for p in own if p.kind != "chip"]
        mine, refs = f"{li.name}: ", {p.ref for p in own}
        prow += [[p.ref, p.display, p.code, p.tolerance, "-",
                  p.role[len(mine):] + (f" ({p.note})" if p.note else "")]
                 for p in lines if p.role.startswith(mine) and p.ref not in refs
                 and p.kind != "chip"]
        console.print(simple_table(None, ["ref", "value", "code", "tol", "kind", "role"], prow))
        if i in rates:
            print_wrapped(console, "rate set by the light: " + _rate_text(
                rates[i], float(c.figures["period_s"]), night_lux(result.request)),
                          indent="  * ", hang="    ")
        for w in list(c.notes) + list(c.warnings):
            print_wrapped(console, w, indent="  - ", hang="    ")
        console.print()


def _rate_text(lr, night_period_s: float, night_lux: float) -> str:
    """One paragraph: the photoresistor network and the period it gives against light; at
    the night's light level the light's own period (its figures are the night's)."""
    import math

    net, rate = lr.clamp.network, lr.rate
    per, lux = rate.period_s["typ"], rate.lux
    clamps = [f"{_eng(net.series_ohm, 'Ω')} in series" if net.series_ohm > 0 else "",
              f"{_eng(net.parallel_ohm, 'Ω')} across it" if math.isfinite(net.parallel_ohm)
              else ""]
    clamps = [c for c in clamps if c]
    return (f"{net.ldr.name} in place of the timing resistor"
            + (f", with {' and '.join(clamps)}" if clamps else "")
            + f": typical period {_eng(night_period_s, 's')} at {night_lux:g} lx (the "
            f"night's light level), {_eng(float(per[-1]), 's')} at {lux[-1]:g} lx"
            + ("" if rate.within_range is None else
               "; every corner within " if rate.within_range else "; not every corner within ")
            + (f"{_eng(rate.period_range_s[0], 's')}..{_eng(rate.period_range_s[1], 's')}"
               if rate.period_range_s else ""))
