"""The pictures and the HTML reports of ``check``, ``bands`` and ``night``."""

from __future__ import annotations

from pulsepick.commands.pictures_blocks import (
    SPREAD_ROWS,
    _cautions,
    _dict_rows,
    _pct,
    _stamp,
    _today,
    _warnings,
    drift_blocks,
    eng,
    num,
    parts_blocks,
    picture_section,
    spread_blocks,
)
from pulsepick.commands.pictures_files import _write, wants_pictures
from pulsepick.commands.pictures_views import (
    circuit_title,
    drift_view,
    night_view,
    spread_view,
    wave_view,
)
from pulsepick.errors import PulsepickError
from pulsepick.output.htmlreport import (
    Cell,
    Items,
    Paragraph,
    Report,
    Section,
    Table,
)

# ============================================================================ check

def check_pictures(args, design, figures: dict, reason: str | None, findings, assumed: dict,
                   ref, engine: str) -> list[str]:
    """Image and report of ``pulsepick check``; returns the lines to announce."""
    if not wants_pictures(args):
        return []
    from pulsepick.analysis.spread import spread

    if ref is None:
        ref = design.reference()
    spr = spread(design)
    views = [v for v in (wave_view(design, ref), spread_view(spr)) if v is not None]
    title = circuit_title(design)

    def page(images):
        return check_report(design, figures, reason, findings, assumed, engine, spr, images)

    return _write(args, views, title, page)


def check_report(design, figures: dict, reason, findings, assumed: dict, engine: str, spr,
                 images) -> Report:
    """The design report of a checked circuit."""
    from pulsepick.analysis.spread import part_tolerances
    from pulsepick.commands.wording import FIGURE_ROWS
    from pulsepick.partslist import parts_list

    fig_rows = []
    for key, label, unit in FIGURE_ROWS:
        si = {"mcd": "mcd"}.get(unit, unit)
        fig_rows.append((label, num(figures[key], unit, si)))
    status = figures["status"] + (f" ({reason})" if reason else "")
    fig_rows.append(("status", status))
    r_tols = {t.tol_minus_pct for t in part_tolerances(design) if t.kind == "R"}
    lines = parts_list(design, led_peak_a=figures.get("led_peak_a"),
                       r_tolerance_pct=max(r_tols) if r_tols else None)
    request = (("circuit", design.topo.label()), ("chip", assumed.get("chip", design.chip.family)),
               ("LED", assumed.get("led", design.parts.led.name)),
               ("supply", f"{design.supply_v:g} V"),
               ("timing capacitor", assumed.get("timing_cap_kind", design.parts.timing_cap)),
               ("figures from", f"the {engine} engine"))
    assume_rows = _dict_rows({k: v for k, v in assumed.items()
                              if k not in ("chip", "led", "timing_cap_kind", "supply_v")})
    sections = [
        Section("request", "What was checked", (Table("request", "", ("", "value"), request),)),
        Section("assumptions", "Assumptions", (Table("assumptions", "", ("", "value"),
                                                     assume_rows),)),
        Section("parts", "Parts and buy list", parts_blocks(
            lines, "Resistor tolerance as the spread analysis takes it from the values; "
                   "ratings for the design supply.", design)),
        Section("figures", "Figures", (Table("figures", f"At {design.supply_v:g} V ({engine} "
                                             "engine)", ("figure", "value"), tuple(fig_rows),
                                             numeric=(False, True)),)),
        picture_section(images),
        Section("spread", "Spread", spread_blocks(
            spr, "Made for this report with the default settings of the spread analysis.")),
        Section("drift", "Drift", (Paragraph(
            "Not computed: check takes one supply. Give a supply range to solve or bands "
            "(e.g. --supply 2.7V..1.8V), or run the night command.", "note"),)),
        _warnings(f.text for f in findings),
        _cautions(),
    ]
    facts = (("period", num(figures["period_s"], "s")), ("flash", num(figures["flash_s"], "s")),
             ("LED peak", num(figures["led_peak_a"], "A")),
             ("supply current", num(figures["supply_avg_a"], "A")),
             ("status", figures["status"]))
    return Report(title=circuit_title(design), subtitle="pulsepick check: analysis of a circuit",
                  facts=facts, sections=tuple(sections), stamp=_stamp("check", spr.seed),
                  generated=_today())


# ============================================================================ bands

def bands_pictures(args, result, advice: tuple[str, ...] = ()) -> list[str]:
    """Image and report of ``pulsepick bands`` (``advice``: the report's advice lines)."""
    if not wants_pictures(args):
        return []
    d = result.design
    dr = None
    if result.supply_range_v is not None:
        from pulsepick.analysis.drift import drift

        dr = drift(d, result.supply_range_v[1], result.supply_range_v[0])
    views = [v for v in (spread_view(result.current),
                         drift_view(dr, result.target_period_s, result.yield_band))
             if v is not None]
    title = circuit_title(d)

    def page(images):
        return bands_report(result, dr, images, advice)

    return _write(args, views, title, page)


def bands_report(result, dr, images, advice: tuple[str, ...] = ()) -> Report:
    from pulsepick.analysis.spread import BAND_CAP_CLASSES, BAND_SERIES
    from pulsepick.commands.wording import CLASS_LABELS
    from pulsepick.partslist import parts_list

    d, cur = result.design, result.current
    head = ("resistors \\ C1", *(f"{CLASS_LABELS[c]} {p:g} %" for c, p in BAND_CAP_CLASSES))
    cells_rows = []
    for series in BAND_SERIES:
        tol = result.cell(series, BAND_CAP_CLASSES[0][0]).resistor_tol_pct
        row: list = [f"{series} {tol:g} %"]
        for cls, _ in BAND_CAP_CLASSES:
            c = result.cell(series, cls)
            row.append(Cell(f"{c.width_pct:.0f} % / {_pct(c.yield_fraction)}"
                            + ("" if c.cap_value_usual else " *"), c.width_pct, "%"))
        cells_rows.append(tuple(row))
    cells_table = Table("bands", "Period spread: P5-P95 width as % of the median / yield", head,
                        tuple(cells_rows), numeric=(False,) + (True,) * len(BAND_CAP_CLASSES))
    supply = (f"{d.supply_v:g} V" if result.supply_range_v is None else
              f"{result.supply_range_v[1]:g} V down to {result.supply_range_v[0]:g} V")
    request = (("circuit", d.label()), ("supply", supply),
               ("ambient", f"{result.temp_range_c[0]:g}..{result.temp_range_c[1]:g} °C"),
               ("builds", f"{result.builds:,} per cell, seed {result.seed}"),
               ("target", Cell(eng(result.target_period_s, "s"), result.target_period_s, "s")),
               ("good build", f"lit within ±{result.yield_band * 100:g} % of the target"))
    figs = tuple((label, num(cur.nominal.get(key), unit)) for key, label, unit in SPREAD_ROWS)
    r_tols = {t.tol_minus_pct for t in cur.tolerances if t.kind == "R"}
    lines = parts_list(d, led_peak_a=cur.nominal.get("led_peak_a"),
                       r_tolerance_pct=max(r_tols) if r_tols else None)
    sections = [
        Section("request", "What was compared", (Table("request", "", ("", "value"), request),)),
        Section("assumptions", "Assumptions", (Items((
            "Resistors and capacitors uniform within their tolerance; the chip's thresholds "
            "drawn with the typical value as the median and the datasheet limits as the "
            "0.1 %/99.9 % points (common practice), within the hysteresis window, one draw "
            "per package; one ambient temperature per build.",
            "Every cell uses the same seed, so cells differ by the parts, not by chance.",
            "C1 values outside the usual range of a kind (marked *) are shown for "
            "comparison only.")),)),
        Section("parts", "Parts and buy list", parts_blocks(lines, design=d)),
        Section("figures", "Figures", (Table("figures", "Nominal figures", ("figure", "value"),
                                             figs, numeric=(False, True)),)),
        picture_section(images),
        Section("spread", "Spread", (cells_table, *spread_blocks(cur),
                                     *((Items(tuple(advice)),) if advice else ()))),
        Section("drift", "Drift", drift_blocks(dr) if dr is not None else (Paragraph(
            "Not computed: give a supply range such as --supply 2.7V..1.8V.", "note"),)),
        _warnings(()),
        _cautions(),
    ]
    facts = (("P50 period", num(cur.quantiles["period_s"][1], "s")),
             ("P5..P95 width", Cell(f"{cur.width_pct():.0f} %", cur.width_pct(), "%")),
             ("yield", Cell(_pct(cur.yield_fraction), cur.yield_fraction, "fraction")),
             ("target", num(result.target_period_s, "s")))
    return Report(title=circuit_title(d), subtitle="pulsepick bands: what tighter parts buy",
                  facts=facts, sections=tuple(sections), stamp=_stamp("bands", result.seed),
                  generated=_today())


# ============================================================================ night

def night_pictures(args, result, night: dict, design=None) -> list[str]:
    """Image and report of ``pulsepick night``; ``design`` is the circuit when there is
    exactly one (a build of several lights is reported by its summed load only)."""
    if not wants_pictures(args):
        return []
    views = [night_view(result, open_ended=night["given"] == "none")]
    title = (f"{result.storage.name} from {result.v_start_v:.2f} V"
             + (f"; {result.load.label}" if result.load is not None else "; no circuit"))

    def page(images):
        return night_report(result, night, design, images)

    return _write(args, views, title, page)


def night_report(result, night: dict, design, images) -> Report:
    from pulsepick.commands.wording import duration_text, verdict

    open_ended = night["given"] == "none"
    s = result.storage
    request = [("storage", f"{s.name}: {eng(result.capacitance_f, 'F')}, rated "
                           f"{s.v_rated_v:.2f} V"),
               ("start", num(result.v_start_v, "V")),
               ("night", "until the stop voltage" if open_ended
                else duration_text(result.duration_s)
                + (f" from {night['dusk'].strftime('%H:%M')}" if night.get("dusk") else "")),
               ("extra load", num(result.extra_load_a, "A")),
               ("circuit", result.load.label if result.load is not None else "none")]
    fig_rows = []
    for p in result.figures:
        when = p.clock or duration_text(p.t_s)
        if p.lit:
            fig_rows.append((p.label, when, num(p.v_v, "V"), num(p.period_s, "s"),
                             num(p.flash_s, "s"), num(p.led_peak_a, "A"),
                             num(p.effective_a, "A"), num(p.effective_cd, "cd")))
        else:
            fig_rows.append((p.label, when, "-", "off", "", "", "", ""))
    shares = result.shares()
    drains = tuple(
        (label, num(charge, "C"), Cell(_pct(shares[key]), shares[key], "fraction"))
        for label, key, charge in (("circuit", "circuit", result.charge_circuit_c),
                                   ("storage leakage", "storage_leakage", result.charge_leak_c),
                                   ("extra load", "extra_load", result.charge_extra_c)))
    night_blocks = [
        Paragraph(f"Night: {verdict(result, open_ended)}."),
        Table("night-summary", "", ("", "value"), (
            ("stop voltage", num(result.v_stop_v, "V")),
            ("end voltage", num(result.v_end_v, "V")),
            ("energy used", num(result.energy_used_j, "J")),
            ("flashes", Cell(f"{result.flashes:,.0f}", result.flashes, ""))),
            numeric=(False, True)),
        Table("drain", "Where the charge goes", ("drain", "charge", "share"), drains,
              numeric=(False, True, True)),
    ]
    if result.load is not None:
        night_blocks.append(Table("night", "Over the night", (
            "", "time", "storage", "period", "flash", "LED peak", "effective", "intensity"),
            tuple(fig_rows), numeric=(False, False) + (True,) * 6))
    sections = [Section("request", "The storage and the night",
                        (Table("request", "", ("", "value"), tuple(request)),))]
    spread_sec = drift_sec = None
    if design is not None:
        spread_sec, drift_sec, parts_sec = _night_design_sections(result, design)
        sections.append(parts_sec)
    sections.append(Section("assumptions", "Assumptions", (Items(tuple(result.assumptions)),)))
    sections.append(picture_section(images))
    sections.append(Section("the-night", "The night", tuple(night_blocks)))
    sections += [x for x in (spread_sec, drift_sec) if x is not None]
    sections.append(_warnings(result.warnings))
    sections.append(_cautions(result.cautions))
    facts = (("runtime", Cell(duration_text(result.runtime_s), result.runtime_s, "s")),
             ("end voltage", num(result.v_end_v, "V")),
             ("energy used", num(result.energy_used_j, "J")))
    return Report(title=f"{s.name}" + (f" with {result.load.label}" if result.load else ""),
                  subtitle="pulsepick night: the storage through a night",
                  facts=facts, sections=tuple(sections), stamp=_stamp("night"),
                  generated=_today(), verdict=verdict(result, open_ended),
                  verdict_good=result.lasts_the_night)


def _night_design_sections(result, design) -> tuple:
    """The spread and the drift of the one circuit over this night's storage voltages
    (either None when not computed) and its parts section."""
    from pulsepick.analysis.drift import drift
    from pulsepick.analysis.spread import spread
    from pulsepick.partslist import parts_list

    lo, hi = min(result.v_end_v, result.v_start_v), result.v_start_v
    rng = (lo, hi) if hi - lo > 1e-3 else None
    drift_sec = None
    try:
        spr = spread(design, supply_range_v=rng)
        spread_sec = Section("spread", "Spread", spread_blocks(
            spr, "Made for this report with the default settings of the spread analysis, "
                 "over the storage voltages of this night."))
    except PulsepickError as err:
        spread_sec = Section("spread", "Spread", (Paragraph(f"Not computed: {err}", "note"),))
    if rng is not None:
        try:
            drift_sec = Section("drift", "Drift", drift_blocks(drift(design, hi, lo)))
        except PulsepickError as err:
            drift_sec = Section("drift", "Drift",
                                (Paragraph(f"Not computed: {err}", "note"),))
    parts_sec = Section("parts", "Parts and buy list", (
        Paragraph(f"{design.label()}, values for {design.supply_v:g} V."),
        *parts_blocks(parts_list(design), design=design)))
    return spread_sec, drift_sec, parts_sec

