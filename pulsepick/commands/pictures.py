"""``--plot`` and ``--report`` for the commands: options, file checks, views and reports.

Shell only. Each command calls :func:`add_picture_arguments` for its options,
:func:`check_picture_targets` before its work (so a bad suffix, a missing plot extra
or an existing file is refused before a long run), and then its own
``*_pictures(args, ...)`` function with the results it computed. Those functions turn
result objects into the views of :mod:`pulsepick.output.plot` and the document of
:mod:`pulsepick.output.htmlreport`, run the analyses a report needs and the command did not
(a spread, a drift) through the core, and write the files atomically: a temporary
file in the same folder, then ``os.replace``. An existing file is replaced only with
``--force``, as with the buy list.
"""

from __future__ import annotations

import argparse
import math
import os
import sys
from datetime import date
from typing import Any

import numpy as np

from pulsepick import __version__
from pulsepick.errors import ExportError, PulsepickError, RequestError, echo
from pulsepick.output.export import write_atomic
from pulsepick.output.htmlreport import (
    Cell,
    Image,
    Items,
    Paragraph,
    Report,
    Section,
    Svg,
    Table,
    render_html,
)
from pulsepick.output.plot import (
    FIGURE_PIXELS,
    PLOT_EXTRA_MESSAGE,
    DriftView,
    NightView,
    SpreadView,
    WaveView,
    image_bytes,
    image_format,
    plot_available,
    require_matplotlib,
)
from pulsepick.units import format_eng, format_figure, format_pct, format_rkm

REPORT_SUFFIXES = (".html", ".htm")
NO_IMAGES = ("No pictures in this report: the plot extra (matplotlib) is not installed. "
             "Install it with pip install 'pulsepick[plot]' and make the report again.")


# ============================================================================ options

def add_picture_arguments(parser: argparse.ArgumentParser) -> None:
    """Add ``--plot``, ``--report`` and (unless the command has it) ``--force``.

    Call it after the command's own options: a command with its own ``--force``
    (``solve``, for the buy list) keeps it, and it then covers these files too.
    """
    g = parser.add_argument_group("pictures")
    g.add_argument("--plot", metavar="FILE.png|FILE.svg",
                   help="draw the figures into an image (PNG or SVG, 1000 x 600 px); needs "
                        "the plot extra: pip install 'pulsepick[plot]'")
    g.add_argument("--report", metavar="FILE.html",
                   help="write a self-contained design report (one HTML file, to print or "
                        "to send to whoever builds it)")
    try:
        g.add_argument("--force", action="store_true",
                       help="let --plot and --report replace an existing file")
    except argparse.ArgumentError:
        pass  # the command's own --force covers these files as well


def wants_pictures(args) -> bool:
    return bool(getattr(args, "plot", None) or getattr(args, "report", None))


def check_picture_targets(args, inputs=(), *, with_buylist: bool = False) -> None:
    """Refuse bad output files before any work is done.

    A ``--plot`` suffix other than .png/.svg, a missing plot extra, a missing folder,
    a folder, a dangling link, an existing file without ``--force``, two options naming
    one file, or an output that is one of the run's ``inputs`` (design, stock or
    profile files): one :class:`PulsepickError`. ``with_buylist`` checks ``--buylist``
    too (before the search; it is written before the pictures).
    """
    from pulsepick.output.export import check_outputs

    plot, report = getattr(args, "plot", None), getattr(args, "report", None)
    force = bool(getattr(args, "force", False))
    outputs = []
    if with_buylist and getattr(args, "buylist", None):
        outputs.append(("--buylist", args.buylist))
    if plot:
        image_format(plot)
        require_matplotlib()
        outputs.append(("--plot", plot))
    if report:
        suffix = os.path.splitext(report)[1].lower()
        if suffix not in REPORT_SUFFIXES:
            raise RequestError(f"--report {echo(report)}: unknown report type "
                               f"{echo(suffix or '(none)')}; accepted: "
                               f"{', '.join(REPORT_SUFFIXES)}")
        outputs.append(("--report", report))
    check_outputs(outputs, inputs, force=force)


def write_file_atomic(path: str, data: bytes, *, force: bool = False) -> None:
    """Write ``data`` to ``path`` atomically (see :func:`pulsepick.output.export.write_atomic`).

    Raises :class:`ExportError` (nothing written) when the file exists and ``force``
    is False, the folder is missing, or the write fails.
    """
    write_atomic(path, data, force=force)


def _write(args, views: list, title: str, report_fn) -> list[str]:
    """Write the image and the report the options ask for; the lines to announce."""
    done = []
    force = bool(getattr(args, "force", False))
    if getattr(args, "plot", None):
        if not views:
            done.append(f"no picture written to {args.plot}: nothing to draw (the circuit "
                        "does not oscillate)")
        else:
            data = image_bytes(views, title, image_format(args.plot))
            write_file_atomic(args.plot, data, force=force)
            done.append(f"picture written to {args.plot}")
    if getattr(args, "report", None):
        images = _images(views, title)
        page = report_fn(images)
        write_file_atomic(args.report, render_html(page).encode("utf-8"), force=force)
        done.append(f"report written to {args.report}")
    return done


def announce(args, lines: list[str]) -> None:
    """Say which files were written (on stdout, not with --json; then on stderr)."""
    if not lines:
        return
    if getattr(args, "json", False):
        for line in lines:
            print(f"pulsepick: {line}", file=sys.stderr)
        return
    from pulsepick.output.render import make_console

    console = make_console()
    for line in lines:
        console.print(line, markup=False, highlight=False)


def _images(views: list, title: str) -> list[Image] | None:
    """PNG images of each view for the report, or None when matplotlib is missing."""
    if not plot_available():
        return None
    out = []
    for v in views:
        out.append(Image(_CAPTIONS[type(v)](v), image_bytes([v], title, "png"),
                         *FIGURE_PIXELS))
    return out


# ============================================================================ views

def circuit_title(design) -> str:
    """One line naming the circuit: topology, chip, LED, supply and values."""
    values = ", ".join(f"{k.upper()} {format_rkm(v, 'R' if k.startswith('r') else 'C')}"
                       for k, v in design.values.items() if v)
    return f"{design.label()} at {design.supply_v:g} V: {values}"


def wave_view(design, ref, target_period_s: float | None = None) -> WaveView | None:
    """One period from a reference run (None when it has no trace: it stalls)."""
    if ref is None or not ref.trace:
        return None
    env, _ = design.env()
    row = ref.figures.row()
    return WaveView(
        t_s=np.asarray(ref.trace["t_s"], dtype=float),
        vc_v=np.asarray(ref.trace["vc_v"], dtype=float),
        led_a=np.asarray(ref.trace["led_a"], dtype=float),
        vt_plus_v=float(np.ravel(env.vt_plus)[0]), vt_minus_v=float(np.ravel(env.vt_minus)[0]),
        supply_v=float(design.supply_v), high_s=float(row["high_s"]),
        target_period_s=target_period_s,
    )


def oscillating_periods(spread) -> tuple[np.ndarray, int]:
    """Periods (s) of the builds that oscillate, and how many builds do not."""
    from pulsepick.circuits.base import DARK, RUNS

    per = np.asarray(spread.samples.get("period_s", ()), dtype=float)
    st = np.asarray(spread.samples.get("status", np.zeros(per.size)))
    ok = ((st == RUNS) | (st == DARK)) & np.isfinite(per)
    return per[ok], int(spread.builds - ok.sum())


def spread_view(spread) -> SpreadView | None:
    """The period histogram of a :class:`~pulsepick.analysis.spread.SpreadResult`."""
    if spread is None or not spread.samples:
        return None
    per, missing = oscillating_periods(spread)
    p5, p50, p95 = spread.quantiles["period_s"]
    if per.size == 0 or not math.isfinite(p50):
        return None
    return SpreadView(period_s=per, p5_s=p5, p50_s=p50, p95_s=p95,
                      target_s=spread.target_period_s, yield_band=spread.yield_band,
                      builds=spread.builds, seed=spread.seed, not_drawn=missing)


def drift_view(drift, target_period_s=None, yield_band=None) -> DriftView | None:
    if drift is None or len(drift.supply_v) < 2:
        return None
    return DriftView(supply_v=drift.supply_v, period_s=drift.period_s,
                     effective_a=drift.effective_a, target_period_s=target_period_s,
                     yield_band=yield_band, dark_below_v=drift.dark_below_v)


def night_view(result, open_ended: bool = False) -> NightView:
    tl = result.timeline
    brightness, unit = None, "A"
    if result.load is not None:
        cd = np.asarray(tl.effective_cd, dtype=float)
        if np.any(np.isfinite(cd) & (cd > 0)):
            brightness, unit = cd, "cd"
        else:
            brightness = np.asarray(tl.effective_a, dtype=float)
    stop = result.v_stop_v if 0 < result.v_stop_v < math.inf else None
    stop_label = "light stops" if result.load is not None else "stop voltage reached"
    return NightView(t_s=np.asarray(tl.t_s, dtype=float), v_v=np.asarray(tl.v_v, dtype=float),
                     brightness=brightness, brightness_unit=unit, v_start_v=result.v_start_v,
                     v_stop_v=stop, runtime_s=result.runtime_s, duration_s=result.duration_s,
                     lasts=result.lasts_the_night, dusk=result.dusk, open_ended=open_ended,
                     stop_label=stop_label)


_CAPTIONS = {
    WaveView: lambda v: ("One period: timing-capacitor voltage with the switching thresholds, "
                         "the gate output and the LED current."),
    SpreadView: lambda v: (f"The period over {v.builds:,} builds (seed {v.seed}) with the "
                           "P5..P95 band" + (" and the target" if v.target_s else "") + "."),
    DriftView: lambda v: "Period and effective LED current as the supply falls.",
    NightView: lambda v: "Storage voltage and brightness through the night.",
}


# ============================================================================ report pieces

eng = format_figure  # a number as the reports print it: engineering notation, '-' if missing


def num(value, unit: str, si_unit: str | None = None) -> Cell:
    """A table cell with the formatted number and its SI value."""
    v = None if value is None else float(value)
    return Cell(eng(v, unit), v, si_unit if si_unit is not None else unit)


_pct = format_pct


def values_rows(design) -> tuple[tuple[Cell | str, ...], ...]:
    rows = []
    for name, value in design.values.items():
        if not value:
            continue
        r = name.startswith("r")
        rows.append((name.upper(), num(value, "Ω" if r else "F", "ohm" if r else "F"),
                     format_rkm(value, "R" if r else "C")))
    return tuple(rows)


def schematic_block(design, lines):
    """The schematic of a design as an SVG block (a note when schemdraw is missing)."""
    from pulsepick.output.schematic import SchematicError, schematic_svg

    try:
        return Svg(f"Schematic: {design.topo.label()}", schematic_svg(design, tuple(lines)))
    except SchematicError as err:
        return Paragraph(f"No schematic: {err}", "note")


def parts_blocks(lines, intro: str | None = None, design=None) -> tuple:
    """The parts list and the buy list of a design's part lines (with ``design``, its
    schematic first)."""
    from pulsepick.partslist import buy_rows

    blocks: list = [Paragraph(intro, "note")] if intro else []
    if design is not None:
        blocks.append(schematic_block(design, lines))
    rows = []
    for p in lines:
        value = Cell(p.display, p.value, p.unit) if p.value is not None else p.display
        rows.append((p.ref, p.param.upper() or "-", value, p.code, p.series or "-",
                     p.tolerance or "-", p.dielectric or "-", p.rating or "-",
                     p.role + (f" ({p.note})" if p.note else "")))
    blocks.append(Table("parts", "Parts", ("ref", "name", "value", "code", "series", "tol",
                                           "kind", "rating", "role"), tuple(rows)))
    buy = []
    for row in buy_rows(tuple(lines)):
        p = row.part
        value = Cell(p.display, p.value, p.unit) if p.value is not None else p.display
        buy.append((str(row.quantity), " ".join(row.refs), value, p.code, p.tolerance or "-",
                    p.dielectric or "-", p.rating or "-", " ".join(row.bands) or "-"))
    blocks.append(Table("buylist", "Buy list (identical parts share a row)",
                        ("qty", "refs", "part", "code", "tol", "kind", "rating",
                         "colour bands"), tuple(buy), numeric=(True,)))
    return tuple(blocks)


SPREAD_ROWS = (("period_s", "period", "s"), ("flash_s", "flash", "s"),
               ("led_peak_a", "LED peak", "A"), ("effective_a", "effective current", "A"),
               ("supply_avg_a", "average supply current", "A"))


def spread_blocks(spread, note: str | None = None) -> tuple:
    """Quantiles, corners, yield and the sources of the period's spread."""
    from pulsepick.analysis.spread import SOURCE_LABELS

    rng = spread.temp_range_c
    supply = ("at the nominal supply" if spread.supply_range_v is None else
              f"supply {spread.supply_range_v[1]:g} V down to {spread.supply_range_v[0]:g} V")
    blocks: list = [Paragraph(
        f"{spread.builds:,} random builds (seed {spread.seed}), ambient {rng[0]:g}..{rng[1]:g} "
        f"°C, {supply}: {_pct(spread.yield_fraction)} of them run lit within "
        f"±{spread.yield_band * 100:g} % of {eng(spread.target_period_s, 's')}; P5..P95 width "
        f"of the period {spread.width_pct():.0f} % of its median.")]
    if note:
        blocks.append(Paragraph(note, "note"))
    rows = []
    for key, word, unit in SPREAD_ROWS:
        if key not in spread.quantiles:
            continue
        p5, p50, p95 = spread.quantiles[key]
        lo, hi = spread.corners.get(key, (math.nan, math.nan))
        hi_text = "no bound (stalls)" if hi == math.inf else eng(hi, unit)
        rows.append((word, num(p5, unit), num(p50, unit), num(p95, unit), num(lo, unit),
                     Cell(hi_text, hi if math.isfinite(hi) else None, unit)))
    blocks.append(Table("spread", "Spread over the builds, and worst-case corners",
                        ("", "P5", "P50", "P95", "corner min", "corner max"), tuple(rows),
                        numeric=(False, True, True, True, True, True)))
    if spread.shares:
        share_rows = tuple(
            (SOURCE_LABELS.get(k, k), Cell(_pct(v, 1), v, "fraction"))
            for k, v in sorted(spread.shares.items(), key=lambda kv: -kv[1]))
        blocks.append(Table("spread-sources", "Where the period's spread comes from",
                            ("source", "share of variance"), share_rows, numeric=(False, True)))
    tol_rows = tuple((t.name.upper(), f"-{t.tol_minus_pct:g}/+{t.tol_plus_pct:g} %",
                      t.cap_kind or "-", t.origin) for t in spread.tolerances)
    blocks.append(Table("tolerances", "Tolerances used", ("part", "tolerance", "kind", "from"),
                        tol_rows))
    if spread.stall_fraction or spread.dark_fraction or spread.unpowered_fraction:
        blocks.append(Paragraph(
            f"{_pct(spread.stall_fraction, 1)} of builds stall, {_pct(spread.dark_fraction, 1)}"
            f" stay dark, {_pct(spread.unpowered_fraction, 1)} are outside the chip's supply "
            "range.", "note"))
    return tuple(blocks)


def drift_blocks(drift) -> tuple:
    from pulsepick.circuits.base import STATUS_WORDS

    rows = []
    for i, v in enumerate(drift.supply_v):
        rows.append((num(v, "V"), num(drift.period_s[i], "s"), num(drift.flash_s[i], "s"),
                     num(drift.led_peak_a[i], "A"), num(drift.effective_a[i], "A"),
                     num(drift.supply_avg_a[i], "A"), STATUS_WORDS[int(drift.status[i])]))
    blocks: list = [Paragraph(
        f"Period {drift.period_change_pct:+.1f} % at {drift.period_change_to_v:.2f} V against "
        f"{drift.v_full:g} V.")]
    blocks.append(Table("drift", "Figures as the supply falls",
                        ("supply", "period", "flash", "LED peak", "effective", "supply current",
                         "status"), tuple(rows), numeric=(True,) * 6))
    if drift.dark_below_v is not None:
        blocks.append(Paragraph(f"The LED goes dark below {drift.dark_below_v:.2f} V.", "note"))
    if drift.unpowered_below_v is not None:
        blocks.append(Paragraph(f"The chip leaves its supply range below "
                                f"{drift.unpowered_below_v:.2f} V.", "note"))
    return tuple(blocks)


def picture_section(images: list[Image] | None) -> Section:
    if images is None:
        return Section("pictures", "Pictures", (Paragraph(NO_IMAGES, "note"),))
    if not images:
        return Section("pictures", "Pictures",
                       (Paragraph("Nothing to draw: the circuit does not oscillate.", "note"),))
    return Section("pictures", "Pictures", tuple(images))


def _stamp(what: str, seed: int | None = None) -> str:
    text = f"Made with pulsepick {__version__} ({what})"
    if seed is not None:
        text += f"; random builds seeded with {seed}, so the same command gives the same numbers"
    return text + ". Figures are model estimates: build one and measure before building many."


def _today() -> str:
    return date.today().isoformat()


def _cautions(extra=()) -> Section:
    from pulsepick.analysis.cautions import GENERAL_CAUTIONS

    texts = tuple(dict.fromkeys((*extra, *GENERAL_CAUTIONS)))
    return Section("cautions", "Cautions", (Items(texts, "caution"),))


def _warnings(texts, empty: str = "None found.") -> Section:
    texts = tuple(texts)
    if not texts:
        return Section("warnings", "Warnings", (Paragraph(empty, "note"),))
    return Section("warnings", "Warnings", (Items(texts, "warning"),))


_LABELS = {"led_vf_v_at_test": ("LED forward voltage at its test current", "V"),
           "led_series_ohm": ("LED series resistance", "Ω"),
           "led_visible_a": ("LED visible from", "A"),
           "effective_intensity_a_s": ("effective-intensity constant a", "s")}
_SUFFIX_UNITS = (("_ohm", "Ω"), ("_v", "V"), ("_a", "A"), ("_s", "s"),
                 ("_f", "F"))
_LABEL_WORDS = (("vt plus", "VT+"), ("vt minus", "VT-"), ("rout", "output resistance"),
                ("led vf", "LED forward voltage"), ("led", "LED"))


def _label(key: str) -> tuple[str, str]:
    """A readable label and the unit for a key such as ``rout_high_ohm``."""
    if key in _LABELS:
        return _LABELS[key]
    unit = ""
    for suffix, u in _SUFFIX_UNITS:
        if key.endswith(suffix):
            key, unit = key[: -len(suffix)], u
            break
    text = f" {key.replace('_', ' ')} "
    for word, nice in _LABEL_WORDS:
        text = text.replace(f" {word} ", f" {nice} ")
    return text.strip(), unit


def _dict_rows(d: dict, labels: dict[str, str] | None = None) -> tuple:
    rows = []
    for k, v in d.items():
        label, unit = _label(k)
        if isinstance(v, float) and unit:
            text = format_eng(v, unit)
        elif isinstance(v, float):
            text = f"{v:g}"
        elif isinstance(v, (list, tuple)):
            text = ", ".join(str(x) for x in v) or "-"
        elif v is None:
            text = "-"
        else:
            text = str(v)
        rows.append(((labels or {}).get(k, label), text))
    return tuple(rows)


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
        from pulsepick.analysis.drift import drift
        from pulsepick.analysis.spread import spread
        from pulsepick.partslist import parts_list

        lo, hi = min(result.v_end_v, result.v_start_v), result.v_start_v
        rng = (lo, hi) if hi - lo > 1e-3 else None
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
        sections.append(Section("parts", "Parts and buy list", (
            Paragraph(f"{design.label()}, values for {design.supply_v:g} V."),
            *parts_blocks(parts_list(design), design=design))))
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


# ============================================================================ solve

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
    words = {"period_s": ("period", "s"), "flash_s": ("flash", "s"),
             "led_peak_a": ("peak current", "A"), "effective_a": ("effective current", "A"),
             "effective_mcd": ("effective intensity", "mcd")}
    aims = req.aims()
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
    facts: tuple = ()
    if c is None:
        sections.append(Section("parts", "Parts and buy list", (Paragraph(
            "Nothing can be offered for this request" + (f": {result.message}"
                                                         if result.message else "."),),)))
        sections.append(picture_section([] if images is not None else None))
    else:
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
    warn = () if c is None else (*c.notes, *c.warnings)
    sections.append(_warnings(warn))
    sections.append(_cautions(GENERAL_CAUTIONS))
    return Report(title=(circuit_title(c.design) if c is not None else req.describe()),
                  subtitle=f"pulsepick solve: “{req.describe()}”", facts=facts,
                  sections=tuple(sections), stamp=_stamp("solve", req.seed), generated=_today())


__all__ = [
    "PLOT_EXTRA_MESSAGE", "add_picture_arguments", "announce", "bands_pictures",
    "check_picture_targets", "check_pictures", "night_pictures", "solve_pictures",
    "write_file_atomic",
]
