"""The pictures and the HTML report of ``solve`` (one light)."""

from __future__ import annotations

import math
from typing import Any

from pulsepick.commands.pictures_blocks import (
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
from pulsepick.commands.pictures_files import (
    _write,
    announce,
    check_picture_targets,
    wants_pictures,
)
from pulsepick.commands.pictures_views import circuit_title, drift_view, spread_view, wave_view
from pulsepick.errors import ExportError
from pulsepick.output.htmlreport import (
    Cell,
    Items,
    Paragraph,
    Report,
    Section,
    Table,
)

SOLVE_FIGURE_ROWS = (
    ("period_s", "period", "s"), ("high_s", "output high", "s"), ("low_s", "output low", "s"),
    ("flash_s", "flash (>= 50 % of peak)", "s"), ("flash_10pct_s", "flash (>= 10 % of peak)", "s"),
    ("led_peak_a", "LED peak current", "A"), ("led_charge_c", "LED charge per flash", "C"),
    ("effective_a", "effective current", "A"), ("effective_mcd", "effective intensity", "mcd"),
    ("supply_avg_a", "average supply current", "A"),
)


def solve_pictures(args, result) -> list[str]:
    """Image and report of ``pulsepick solve`` for the circuit ``--pick`` (default the best).

    Call after ``assess``; prints which files were written (stderr with --json) and
    returns those lines. Checks the files first, so it is safe on its own; calling
    :func:`check_picture_targets` before the search refuses bad files earlier.
    """
    if not wants_pictures(args):
        return []
    check_picture_targets(args)
    pick = int(getattr(args, "pick", 1) or 1)
    cands = result.candidates
    if cands and not 1 <= pick <= len(cands):
        raise ExportError(f"--pick {pick}: there are {len(cands)} candidates; choose 1 to "
                          f"{len(cands)}")
    c = cands[pick - 1] if cands else None
    views: list[Any] = []
    title = result.request.describe()
    if c is not None:
        req = result.request
        views = [v for v in (
            wave_view(c.design, c.reference, req.targets.period_s),
            spread_view(c.spread),
            drift_view(c.drift, req.targets.period_s,
                       c.spread.yield_band if c.spread is not None else None),
        ) if v is not None]
        title = f"“{result.request.describe()}”: #{c.rank} {circuit_title(c.design)}"

    def page(images):
        return solve_report(result, c, images)

    lines = _write(args, views, title, page)
    announce(args, lines)
    return lines


def solve_report(result, c, images) -> Report:
    """The design report of a solver result, detailed for candidate ``c``."""
    from pulsepick.analysis.cautions import GENERAL_CAUTIONS

    req = result.request
    aims = req.aims()
    sections = _solve_request_sections(result, req, aims)
    facts: tuple = ()
    if c is None:
        sections.append(Section("parts", "Parts and buy list", (Paragraph(
            "Nothing can be offered for this request" + (f": {result.message}"
                                                         if result.message else "."),),)))
        sections.append(picture_section([] if images is not None else None))
    else:
        more, facts = _solve_candidate_sections(c, aims, images)
        sections += more
    warn = () if c is None else (*c.notes, *c.warnings)
    sections.append(_warnings(warn))
    sections.append(_cautions(GENERAL_CAUTIONS))
    return Report(title=(circuit_title(c.design) if c is not None else req.describe()),
                  subtitle=f"pulsepick solve: “{req.describe()}”", facts=facts,
                  sections=tuple(sections), stamp=_stamp("solve", req.seed), generated=_today())


def _solve_request_sections(result, req, aims) -> list:
    """The request and its aims, the assumptions, what cannot be met, the ranked circuits."""
    words = {"period_s": ("period", "s"), "flash_s": ("flash", "s"),
             "led_peak_a": ("peak current", "A"), "effective_a": ("effective current", "A"),
             "effective_mcd": ("effective intensity", "mcd")}
    aim_rows = tuple((words[k][0], num(v, words[k][1]), "asked" if stated else "assumed")
                     for k, (v, stated) in aims.items())
    supply = f"{req.supply_v:g} V" + (f" full .. {req.supply_end_v:g} V end of night"
                                       if req.supply_end_v is not None else " (steady)")
    context = (("supply", supply), ("chips", ", ".join(req.families)), ("LED", req.led.name),
               ("resistors", f"{req.r_series}, timing {eng(req.r_min_ohm, 'Ω')} .. "
                             f"{eng(req.r_max_ohm, 'Ω')}"),
               ("capacitors", f"{req.c_series}, {eng(req.c_min_f, 'F')} .. "
                              f"{eng(req.c_max_f, 'F')}"),
               ("timing capacitor", ", ".join(req.timing_caps)),
               ("cores", ", ".join(req.cores)), ("stages", ", ".join(req.stages)),
               ("parts drawer", req.stock.source if req.stock else "any standard value"),
               ("spread", f"{req.builds:,} builds, seed {req.seed}"))
    defaults = set(req.defaults)
    sections = [Section("request", "The request", (
        Paragraph(f"“{req.describe()}”"),
        Table("aims", "Aims", ("", "value", ""), aim_rows, numeric=(False, True, False)),
        Table("request", "The build", ("", "value"), context),
        Paragraph("Left at their defaults: " + (", ".join(sorted(defaults)) or "none") + ".",
                  "note")))]
    assumed = {k: v for k, v in req.assumptions().items() if k not in ("aims", "defaults")}
    sections.append(Section("assumptions", "Assumptions", (
        Table("assumptions", "The request as the solver used it", ("", "value"),
              _dict_rows(assumed)),
        Paragraph("An aim marked assumed was not in the request; the solver aims at it "
                  "softly.", "note"))))
    if result.explanations:
        sections.append(Section("limits", "What cannot be met exactly",
                                (Items(tuple(result.explanations)),)))
    rank_rows = tuple((str(x.rank), x.design.topo.label(), x.design.chip.family,
                       num(x.figures.get("period_s"), "s"), num(x.figures.get("flash_s"), "s"),
                       num(x.figures.get("led_peak_a"), "A"),
                       num(x.figures.get("supply_avg_a"), "A"),
                       Cell(f"{x.score:.2f}", x.score, ""))
                      for x in result.candidates)
    if rank_rows:
        sections.append(Section("candidates", "Ranked circuits", (
            Table("candidates", f"{result.evaluated:,} circuits evaluated; lower score is better",
                  ("#", "circuit", "chip", "period", "flash", "peak", "supply", "score"),
                  rank_rows, numeric=(True, False, False, True, True, True, True, True)),)))
    return sections


def _solve_candidate_sections(c, aims, images) -> tuple[list, tuple]:
    """The sections of the candidate ``c`` (parts, figures, pictures, spread, drift) and
    the key facts of the report's head."""
    sections = []
    d = c.design
    sections.append(Section("parts", f"Parts and buy list of #{c.rank}", (
        Paragraph(f"{d.topo.label()} on {d.chip.family}, {d.supply_v:g} V."),
        *parts_blocks(c.parts, design=d))))
    ref = c.reference_figures
    fig_rows = []
    for key, word, unit in SOLVE_FIGURE_ROWS:
        aim = aims.get(key)
        aim_cell = "-" if aim is None else Cell(eng(aim[0], unit) + ("" if aim[1] else " *"),
                                                aim[0], unit)
        err = c.errors.get(key)
        fig_rows.append((word, aim_cell, num(c.figures.get(key), unit),
                         Cell("-" if err is None or not math.isfinite(err)
                              else f"{err * 100:+.1f} %", err, "fraction"),
                         num(None if ref is None else ref.get(key), unit)))
    sections.append(Section("figures", "Figures", (Table(
        "figures", "At the design supply (* assumed aim)",
        ("", "aim", "fast engine", "error", "reference"), tuple(fig_rows),
        numeric=(False, True, True, True, True)),)))
    sections.append(picture_section(images))
    if c.spread is not None:
        sections.append(Section("spread", "Spread", spread_blocks(c.spread)))
    else:
        sections.append(Section("spread", "Spread", (Paragraph(
            f"Estimate from the parts only: period ±{c.period_spread * 100:.1f} % (one "
            "standard deviation).", "note"),)))
    sections.append(Section("drift", "Drift", drift_blocks(c.drift) if c.drift is not None
                            else (Paragraph("Not computed: a steady supply was asked for; "
                                            "give a range such as --supply 2.7V..1.8V.",
                                            "note"),)))
    facts = (("period", num(c.figures.get("period_s"), "s")),
             ("flash", num(c.figures.get("flash_s"), "s")),
             ("LED peak", num(c.figures.get("led_peak_a"), "A")),
             ("supply current", num(c.figures.get("supply_avg_a"), "A")))
    if c.spread is not None:
        facts += (("yield", Cell(_pct(c.spread.yield_fraction), c.spread.yield_fraction,
                                 "fraction")),)
    return sections, facts
