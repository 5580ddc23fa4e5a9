"""Pieces of the HTML reports: figures as cells, parts and buy list, spread, drift,
picture, warnings and cautions sections, the stamp."""

from __future__ import annotations

import math
from datetime import date

from pulsepick import __version__
from pulsepick.commands.pictures_files import NO_IMAGES
from pulsepick.output.htmlreport import (
    Cell,
    Image,
    Items,
    Paragraph,
    Section,
    Svg,
    Table,
)
from pulsepick.units import format_eng, format_figure, format_pct, format_rkm

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
