"""The whole build as one answer: ``--report`` and ``--plot`` for several lights.

The report holds every light (its circuit, figures and values), the package map (which
gate of which package does what, with the pins of the standard 14-pin hex inverter),
the dusk gating, the lock share, the energy budget, the night (when the design file
gives a storage and a night) and the buy list with identical parts merged. The picture
shows one period of each light (reference engine) and the night's storage voltage.

Shell code: it renders result objects (:class:`pulsepick.solve.BuildResult`) and runs the
night model for the picture and the report; the numbers come from the core.
"""

from __future__ import annotations

import argparse
from dataclasses import replace

from pulsepick.analysis.pinout import GROUND_PIN, SUPPLY_PIN, package_map
from pulsepick.commands.pictures import (
    _cautions,
    _stamp,
    _today,
    _warnings,
    _write,
    check_picture_targets,
    eng,
    night_view,
    num,
    parts_blocks,
    picture_section,
    wants_pictures,
    wave_view,
)
from pulsepick.output.htmlreport import Cell, Items, Paragraph, Report, Section, Table


def build_night(design_file, result):
    """The night of a design file with every light's load: ``(NightResult, night)`` or None.

    The storage, the night and the extra load are read as ``pulsepick night`` reads them
    from the file; the load is the lights' load curves added
    (:func:`pulsepick.analysis.multi.combined_load_curve`).
    """
    if design_file is None or design_file.storage is None:
        return None
    from pulsepick.analysis.multi import combined_load_curve
    from pulsepick.analysis.night import simulate_night
    from pulsepick.commands import night as night_cmd
    from pulsepick.commands.night_options import read_storage, supply_grid
    from pulsepick.design import load_curve
    from pulsepick.units import parse_quantity

    parser = argparse.ArgumentParser(add_help=False)
    night_cmd.add_arguments(parser)
    args = parser.parse_args([design_file.path])
    night_cmd._apply_design(args)
    night = night_cmd._read_night(args)
    if night is None:
        return None
    storage = read_storage(args.storage, args.rated)
    v_start = (storage.v_rated_v if args.start is None
               else parse_quantity(args.start, "voltage", bare_ok=True))
    stop_at = None if args.stop_at is None else parse_quantity(args.stop_at, "voltage",
                                                                bare_ok=True)
    grid = supply_grid(max(v_start, storage.v_rated_v))
    # a photoresistor light draws at the night's light level (pulsepick.packing)
    night_designs = result.night_designs or [li.pick.design for li in result.lights]
    curves = [replace(load_curve(d, grid), label=li.name)
              for li, d in zip(result.lights, night_designs, strict=True)]
    load = combined_load_curve(curves, label=f"{len(curves)} lights")
    extra = parse_quantity(args.extra_load, "current", bare_ok=True, allow_zero=True)
    out = simulate_night(storage, v_start, night["duration_s"], load, stop_at_v=stop_at,
                         dusk=night["dusk"], extra_load_a=extra, leak_level=args.leakage)
    return out, night


def build_views(result, night=None) -> list:
    """One period of each light (reference engine), then the night when there is one."""
    views = []
    for li in result.lights:
        c = li.pick
        if c is not None and c.reference is not None:
            v = wave_view(c.design, c.reference, li.asked_s)
            if v is not None:
                views.append(replace(v, source=f"{li.name}, reference simulation",
                                     light=li.name))
    if night is not None:
        views.append(night_view(night[0]))
    return views


def build_report(result, lines, *, night=None, images=None) -> Report:
    """The design report of a whole build (``lines``: its parts, ``PartLine`` tuple)."""
    from pulsepick.analysis.cautions import POLARITY_AND_SHORTS

    breq = result.request
    names = [li.name for li in result.lights]
    plan = result.plan
    sections = _light_sections(result, names, plan)
    sections.append(_package_section(result, names, plan))
    sections += [s for s in (_gating_section(result, names), _lock_section(result, names))
                 if s is not None]
    sections.append(_energy_section(result, night))
    if night is not None:
        sections.append(_night_section(night))
    sections.append(Section("parts", "Parts and buy list", parts_blocks(lines)))
    sections.append(picture_section(images))
    sections.append(_warnings(result.warnings))
    storage = any(p.kind == "storage" for p in lines)
    sections.append(_cautions((POLARITY_AND_SHORTS,) if storage else ()))
    return Report(
        title=breq.describe(), subtitle=f"pulsepick solve: {len(result.lights)} lights",
        facts=(("lights", str(len(result.lights))), ("packages", str(len(plan.packages))),
               ("supply", num(result.total_supply_a, "A"))),
        sections=tuple(sections), stamp=_stamp("solve, a whole build",
                                               breq.lights[0].request.seed),
        generated=_today(), verdict=result.message, verdict_good=result.success)


def _light_sections(result, names, plan) -> list:
    """The table of every light, then one section per light with its parts."""
    from pulsepick.commands.solve_summary import _spread

    light_rows = []
    for i, li in enumerate(result.lights):
        c = li.pick
        f = c.figures
        med = _spread(c)[0]
        light_rows.append((li.name, num(li.asked_s, "s"), c.design.topo.label(),
                           c.design.chip.family, f"U{plan.package_of(i)}",
                           num(f["period_s"] if med is None else med, "s"),
                           num(f["flash_s"], "s"),
                           num(f["led_peak_a"], "A"), num(f["supply_avg_a"], "A")))
    sections = [Section("lights", "Lights", (Table(
        "lights", "Every light of the build (period: the median of its builds)",
        ("light", "asked", "circuit", "chip", "package", "period", "flash", "LED peak",
         "supply"),
        tuple(light_rows), numeric=(False, True, False, False, False, True, True, True,
                                    True)),))]
    for li in result.lights:
        c = li.pick
        rows = tuple((p.ref, Cell(p.display, p.value, p.unit) if p.value is not None
                      else p.display, p.code, p.role) for p in c.parts if p.kind != "chip")
        sections.append(Section(f"light-{names.index(li.name) + 1}", li.name, (
            Paragraph(f"{c.design.topo.label()} on {c.design.chip.family} at "
                      f"{c.design.supply_v:g} V"),
            Table(f"values-{names.index(li.name) + 1}", f"{li.name}: parts",
                  ("ref", "value", "code", "role"), rows),
            *((Items(tuple(c.notes) + tuple(c.warnings)),) if c.notes or c.warnings else ()))))
    return sections


def _package_section(result, names, plan) -> Section:
    """The packages: which gate of which package does what, and the pins."""
    gates = package_map(plan, names, [li.pick.design.topo for li in result.lights])
    map_rows = tuple((f"U{g.package}", str(g.gate), str(g.in_pin), str(g.out_pin), g.role)
                     for g in gates)
    pkg_blocks = [Paragraph(f"{plan.describe()}: {len(plan.packages)} package"
                            f"{'s' if len(plan.packages) != 1 else ''}."),
                  Table("package-map", "Package map (standard 14-pin hex inverter)",
                        ("package", "gate", "in pin", "out pin", "does"), map_rows),
                  Paragraph(f"Every hex package: ground on pin {GROUND_PIN}, the supply on pin "
                            f"{SUPPLY_PIN}, with a 100 nF capacitor across them at the pins "
                            "(common practice).", "note")]
    timers = [p for p in plan.packages if p.is_timer]
    if timers:
        pkg_blocks.append(Paragraph(", ".join(
            f"U{p.number}: CMOS 555 for {', '.join(names[i] for i in p.lights)}"
            for p in timers) + "."))
    return Section("packages", "Packages", tuple(pkg_blocks))


def _gating_section(result, names) -> Section | None:
    """The dusk gating: how the lights are held by day and what they draw then."""
    if result.gating is None:
        return None
    g = result.gating
    rows = tuple((names[h.light], h.kind, num(h.held_a, "A"), num(h.held_end_a, "A"),
                  "yes" if h.holds else "no") for h in g.holds)
    return Section("gating", "Dusk gating", (
        Paragraph(f"{g.arrangement}. The detector takes {g.detector_gates} gate"
                  f"{'s' if g.detector_gates != 1 else ''}."),
        Table("gating", "Held by day", ("light", "hold", "draw at full supply",
                                        "draw at the end of the night", "holds"), rows),
        Paragraph(f"Held by day the lights draw {eng(g.held_a, 'A')} together, "
                  "besides the chips' quiescent current.", "note")))


def _lock_section(result, names) -> Section | None:
    """The share of builds with a pair of lights near a lock, and the remedies."""
    if result.lock_share is None or not result.lock_share.pairs:
        return None
    s = result.lock_share
    rows = tuple((f"{names[p.a]} / {names[p.b]}", f"U{p.package}", p.nearest,
                  Cell(f"{p.share:.1%}", p.share, "fraction")) for p in s.pairs)
    blocks = [Table("lock-share", f"Share of builds with a pair within {s.margin:.0%} "
                    "of p:q, q <= 4", ("pair", "package", "nearest", "lock share"), rows,
                    numeric=(False, False, False, True)),
              Paragraph(f"Any pair near a lock: {s.share:.1%} of {s.builds:,} builds "
                        f"(seed {s.seed}).")]
    if result.remedies:
        blocks.append(Items(tuple(f"{r.action}: {r.share:.1%}" + (
            f" ({r.option})" if r.option else "") for r in result.remedies)))
    return Section("lock", "Lock risk", tuple(blocks))


def _energy_section(result, night=None) -> Section:
    """The energy budget of all lights (over the design file's night when there is one,
    else a 12 h night)."""
    from pulsepick.commands.wording import duration_text
    from pulsepick.solve.nightcheck import DEFAULT_NIGHT_S

    night_s = DEFAULT_NIGHT_S if night is None else float(night[0].duration_s)
    budget = [("all lights at the design supply", num(result.total_supply_a, "A")),
              (f"over the {duration_text(night_s)} night",
               num(result.total_supply_a * night_s, "C"))]
    if result.gating is not None:
        budget.append(("held by day", num(result.gating.held_a, "A")))
    return Section("energy", "Energy budget", (
        Table("energy", "", ("", "value"), tuple(budget), numeric=(False, True)),))


def _night_section(night) -> Section:
    """The night of the design file's storage with every light's load."""
    from pulsepick.commands.wording import duration_text, verdict
    from pulsepick.output.htmlreport import Cell

    res = night[0]
    return Section("night", "The night", (
        Paragraph(f"Night: {verdict(res, False)}."),
        Table("night", "", ("", "value"), (
            ("start", num(res.v_start_v, "V")),
            ("runs for", Cell(duration_text(res.runtime_s), float(res.runtime_s), "s")),
            ("night", Cell(duration_text(res.duration_s), float(res.duration_s), "s")),
            ("lasts the night", "yes" if res.lasts_the_night else "no")))))


def build_pictures(args, result, lines, design_file=None) -> list[str]:
    """Write the build's picture and report as the options ask; the lines to announce."""
    if not wants_pictures(args):
        return []
    check_picture_targets(args)
    night = build_night(design_file, result)
    views = build_views(result, night)

    def page(images):
        return build_report(result, lines, night=night, images=images)

    return _write(args, views, result.request.describe(), page)


__all__ = ["build_night", "build_pictures", "build_report", "build_views"]
