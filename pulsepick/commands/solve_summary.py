"""The compact ``pulsepick solve`` report: one ranked table, then one short block for #1.

About 60 lines at 100 columns: the request and its assumptions folded into a few
wrapped lines, the ranked circuits (parts as RKM codes, the builds' median period,
P5..P95, yield, flash, peak and whether the circuit lasts the night), then the
best circuit's parts, key figures, spread and warnings, and the cautions. The full
report of every candidate is ``--detail`` (:func:`pulsepick.commands.solve_report.render_detail`).
"""

from __future__ import annotations

import math

from rich import box
from rich.table import Table

from pulsepick.commands.solve_text import (
    _bullet, _eng, _render_cautions, crossing_text, miss_caption, render_unmet,
)

#: Columns that never wrap (a value stays with its unit).
_NUMERIC = ("period", "P5..P95", "yield", "flash", "peak", "night")


def _source_words(key: str) -> str:
    """A spread source in plain words ("chip thresholds", not the key)."""
    from pulsepick.analysis.spread import SOURCE_LABELS

    return SOURCE_LABELS.get(key, key.replace("_", " "))


def _spread(c) -> tuple[float | None, float | None, float | None, float | None]:
    """(median, P5, P95 period in s, yield fraction) of the builds, or Nones."""
    med = getattr(c, "median_period_s", None)
    if med is not None and getattr(c, "p5_period_s", None) is not None:
        return med, c.p5_period_s, c.p95_period_s, getattr(c, "yield_fraction", None)
    s = c.spread
    if s is None or "period_s" not in s.quantiles:
        return None, None, None, None
    p5, p50, p95 = (float(x) for x in s.quantiles["period_s"])
    return p50, p5, p95, float(s.yield_fraction)


def band_text(lo: float | None, hi: float | None) -> str:
    """``2.71..3.3 s`` (one unit when both ends share it), or ``-``."""
    if lo is None or hi is None or not (math.isfinite(lo) and math.isfinite(hi)):
        return "-"
    a, b = _eng(lo, "s"), _eng(hi, "s")
    num, _, unit = a.partition(" ")
    if unit and b.endswith(" " + unit):
        a = num
    return f"{a}..{b}"


def hours_text(seconds: float) -> str:
    """A time after dusk as hours and minutes: ``9h40``."""
    minutes = int(round(seconds / 60.0))
    return f"{minutes // 60}h{minutes % 60:02d}"


def night_word(c) -> str:
    """Whether the circuit lasts the night on the storage: ``lasts``, ``dark 9h40`` (the
    light stops that long after dusk), ``n/a`` (a supply range but no storage given) or
    ``-`` (a steady supply)."""
    night = getattr(c, "night", None)
    if night is not None:
        return "lasts" if night.lasts else f"dark {hours_text(night.lit_s)}"
    return "-" if c.end_figures is None else "n/a"


def night_caption(result) -> str | None:
    """What the night column says, under the table (None for a steady supply)."""
    req, plan = result.request, getattr(result, "night_plan", None)
    if plan is not None:
        s = plan.storage
        length = hours_text(plan.night_s).replace("h00", " h")
        what = (f"a {length} night" + ("" if plan.night_given else " (assumed; --night sets "
                                                                   "it)"))
        return (f"night: each circuit run on the {s.name} from {plan.v_start_v:g} V at dusk "
                f"down to {plan.v_stop_v:g} V over {what}, with the storage's settled leakage: "
                "'lasts', or 'dark' and the hours:minutes after dusk its light stops")
    if req.supply_end_v is None:
        return None
    return (f"night: n/a without a storage; --storage (a part such as 5f-2v7 or a "
            f"capacitance such as 1F) runs each circuit's night from {req.supply_v:g} V down "
            f"to {req.supply_end_v:g} V")


def night_text(night) -> str:
    """A candidate's night on the storage in words."""
    if night.lasts:
        return f"lasts the night, {night.v_end_v:.2f} V left at dawn"
    return f"dark {hours_text(night.lit_s)} after dusk: {night.stop_reason}"


def circuit_text(c) -> str:
    """The circuit and, when the label does not say it, the chip family."""
    label, family = c.design.topo.label(), c.design.chip.family
    return label if label.startswith(family) else f"{label} on {family}"


def parts_codes(c) -> str:
    """The resistors and capacitors as RKM codes, in designator order."""
    return " ".join(p.code for p in c.parts if p.kind in ("resistor", "capacitor"))


def ranked_table(result) -> Table:
    """The one summary table of the candidates."""
    table = Table(title=f"Ranked circuits ({result.evaluated:,} evaluated in "
                        f"{result.search_s:.2f} s; period: the median of the builds)",
                  box=box.SIMPLE_HEAD, title_justify="left", pad_edge=False,
                  collapse_padding=True)
    table.add_column("#", justify="right", no_wrap=True)
    table.add_column("circuit", ratio=3)
    table.add_column("parts", ratio=2)
    for name in _NUMERIC:
        table.add_column(name, justify="right", no_wrap=True)
    for c in result.candidates:
        med, p5, p95, yld = _spread(c)
        period = _eng(med if med is not None else c.figures["period_s"], "s")
        f = c.figures
        table.add_row(
            str(c.rank), circuit_text(c) + (" ! " + ", ".join(c.misses) if c.misses else ""),
            parts_codes(c),
            period, band_text(p5, p95), "-" if yld is None else f"{yld * 100:.0f} %",
            _eng(f["flash_s"], "s"), _eng(f["led_peak_a"], "A"), night_word(c))
    return table


def assumptions_text(req) -> str:
    """The request's assumptions folded into one paragraph."""
    from pulsepick.units import format_eng

    aims = req.aims()
    words = {"period_s": ("period", "s"), "flash_s": ("flash", "s"),
             "led_peak_a": ("peak", "A"), "effective_a": ("effective", "A"),
             "effective_mcd": ("intensity", "mcd")}
    asked, assumed = [], []
    for key, (value, stated) in aims.items():
        word, unit = words[key]
        text = f"{word} {value:.3g} mcd" if unit == "mcd" else f"{word} {_eng(value, unit)}"
        (asked if stated else assumed).append(text)
    supply = (f"supply {req.supply_v:g} V" + (f"..{req.supply_end_v:g} V"
                                               if req.supply_end_v is not None else " steady"))
    context = [supply, f"chips {', '.join(req.families)}", f"LED {req.led.name}",
               f"resistors {req.r_series} {format_eng(req.r_min_ohm, 'Ω')}.."
               f"{format_eng(req.r_max_ohm, 'Ω')}",
               f"capacitors {req.c_series} {format_eng(req.c_min_f, 'F')}.."
               f"{format_eng(req.c_max_f, 'F')}",
               f"parts {'from ' + req.stock.source if req.stock else 'any standard value'}",
               f"{req.builds:,} builds, seed {req.seed}"]
    if req.chip_spread != "normal":
        context.append(f"chip thresholds read as {req.chip_spread}")
    out = f"asked: {', '.join(asked) or '-'}"
    if assumed:
        out += f"; assumed: {', '.join(assumed)}"
    return out + f"; {'; '.join(context)} (--detail lists every assumption)"


def shown_rank(pick: int, count: int) -> int:
    """The rank of the circuit the summary shows in full: ``--pick`` held to 1..``count``."""
    return min(max(pick, 1), count)


def render_summary(console, result, *, buylist: str | None = None, pick: int = 1,
                   schematic: bool = False) -> None:
    """The compact report of a solver result (see the module docstring)."""
    from pulsepick.output.export import solve_cautions
    from pulsepick.output.render import print_wrapped

    req = result.request
    console.print(f"[bold]pulsepick solve[/bold]: {req.describe()}", highlight=False)
    print_wrapped(console, assumptions_text(req), indent="  ", hang="  ")
    console.print()
    if render_unmet(console, result, solve_cautions(req)):
        return
    console.print(ranked_table(result))
    for caption in (miss_caption(result), night_caption(result), crossing_text(result)):
        if caption:
            print_wrapped(console, caption, indent="", hang="  ")
    console.print()
    chosen = result.candidates[shown_rank(pick, len(result.candidates)) - 1]
    render_block(console, req, chosen, schematic=schematic)
    console.print()
    if buylist:
        console.print(f"Buy list of circuit {pick} written to {buylist}", markup=False)
        console.print()
    _render_cautions(console, solve_cautions(req))
    console.print()
    print_wrapped(console, "More: --detail for every circuit's figures, spread, drift and "
                           "waveform; --pick N --detail for one; --schematic for the drawing; "
                           "--json for everything.", indent="", hang="  ")


def render_block(console, req, c, *, schematic: bool = False) -> None:
    """One short block for a candidate: parts, key figures, spread, night, warnings."""
    from pulsepick.output.render import print_wrapped, simple_table

    d = c.design
    console.print(f"[bold]#{c.rank}  {d.topo.label()}[/bold] on {d.chip.family}, "
                  f"{d.supply_v:g} V", highlight=False)
    rows = [[p.ref, p.display, p.code if p.value is not None else "", p.tolerance,
             p.dielectric or "", p.rating, p.role] for p in c.parts]
    console.print(simple_table(None, ["ref", "value", "code", "tol", "kind", "rating", "role"],
                               rows))
    f = c.figures
    aims = req.aims()
    err = c.errors.get("period_s")
    aim = aims.get("period_s")
    period = _eng(f["period_s"], "s")
    if aim is not None and err is not None and math.isfinite(err):
        period += f" (aim {_eng(aim[0], 's')}, {err * 100:+.1f} %)"
    figs = [f"period {period}", f"flash {_eng(f['flash_s'], 's')}",
            f"peak {_eng(f['led_peak_a'], 'A')}",
            f"as bright as a steady {_eng(f['effective_a'], 'A')} (effective)",
            f"supply {_eng(f['supply_avg_a'], 'A')} average"]
    ref = c.reference_figures
    if ref is not None and math.isfinite(ref.get("period_s", math.nan)) and f["period_s"]:
        gap = (ref["period_s"] / f["period_s"] - 1) * 100
        figs.append("reference simulation agrees within 0.1 %" if abs(gap) < 0.1 else
                    f"reference simulation period {gap:+.1f} %")
    print_wrapped(console, "figures: " + ", ".join(figs), indent="  ", hang="    ")
    med, p5, p95, yld = _spread(c)
    if med is not None:
        s = c.spread
        text = (f"builds: median period {_eng(med, 's')}, P5..P95 {band_text(p5, p95)}, "
                f"{yld * 100:.0f} % within ±{s.yield_band * 100:.0f} % over {s.builds:,} builds")
        shares = sorted(((v, k) for k, v in s.shares.items() if v > 0.05), reverse=True)
        if shares:
            text += "; spread mostly from " + ", ".join(
                f"{_source_words(k)} {v * 100:.0f} %" for v, k in shares[:3])
        print_wrapped(console, text, indent="  ", hang="    ")
    dr = c.drift
    if dr is not None:
        text = (f"through the night: period {dr.period_change_pct:+.1f} % at "
                f"{dr.period_change_to_v:.2f} V")
        if dr.dark_below_v is not None:
            text += f"; the LED goes dark below {dr.dark_below_v:.2f} V"
        print_wrapped(console, text, indent="  ", hang="    ")
    if getattr(c, "night", None) is not None:
        print_wrapped(console, "on the storage: " + night_text(c.night), indent="  ",
                      hang="    ")
    for p in c.parts:
        if p.note:
            _bullet(console, f"{p.ref}: {p.note}", indent="  - ", hang="    ")
    for text in list(c.notes) + list(c.warnings):
        _bullet(console, text, indent="  ! ", hang="    ")
    if schematic:
        from pulsepick.output.schematic import schematic_lines

        console.print()
        for line in schematic_lines(c.design, c.parts):
            console.print(f"  {line}", markup=False, highlight=False)

