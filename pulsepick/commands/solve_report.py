"""The detailed report of a single-light ``pulsepick solve`` (``--detail``).

The request and its assumptions, the ranked table, then every candidate: its parts, the
figures of both engines, the spread of the builds (with a histogram for the best), the
drift through the night, and one period of the best circuit's waveform.
"""

from __future__ import annotations

import math

from pulsepick.commands.solve_text import (
    _bullet, _eng, _render_cautions, crossing_text, miss_caption, render_unmet,
)
from pulsepick.units import format_pct


def _pct(x) -> str:
    return format_pct(x, 1, signed=True)


_FIG_ROWS = (
    ("period_s", "period", "s"),
    ("high_s", "output high", "s"),
    ("low_s", "output low", "s"),
    ("flash_s", "flash (>= 50 % of peak)", "s"),
    ("flash_10pct_s", "flash (>= 10 % of peak)", "s"),
    ("led_peak_a", "LED peak current", "A"),
    ("led_charge_c", "LED charge per flash", "C"),
    ("effective_a", "effective current", "A"),
    ("effective_mcd", "effective intensity", "mcd"),
    ("supply_avg_a", "average supply current", "A"),
)


def _fig_text(key: str, value, unit: str) -> str:
    if unit == "mcd":
        return "-" if value is None or not math.isfinite(value) else f"{value:.3g} mcd"
    return _eng(value, unit)


def render_report(console, result, *, buylist: str | None = None, pick: int = 1,
                  schematics: bool = False) -> None:
    """The terminal report of a solver result (readable at 100 columns, no colour needed);
    ``schematics`` draws each candidate."""
    from pulsepick.commands.solve_summary import night_caption, night_word
    from pulsepick.output.export import solve_cautions
    from pulsepick.output.render import print_wrapped, simple_table

    req = result.request
    cautions = solve_cautions(req)
    console.print(f"[bold]pulsepick solve[/bold]: {req.describe()}", highlight=False)
    console.print()
    _render_request(console, req, result)
    if render_unmet(console, result, cautions):
        return
    rows = []
    night = req.supply_end_v is not None
    for c in result.candidates:
        f = c.figures
        label = c.design.topo.label()
        if c.misses:
            label += " ! " + ", ".join(c.misses)
        row = [
            str(c.rank), label, c.design.chip.family,
            *_spread_cells(c, f), _eng(f["flash_s"], "s"),
            _eng(f["led_peak_a"], "A"), _eng(f["supply_avg_a"], "A"),
        ]
        if night:
            row.append(night_word(c))
        rows.append(row + [f"{c.score:.2f}"])
    heads = ["#", "circuit", "chip", "period", "P5..P95", "±10 %", "flash",
             "peak", "supply"] + (["night"] if night else []) + ["score"]
    console.print(simple_table(
        f"Ranked circuits ({result.evaluated:,} evaluated in {result.search_s:.2f} s; lower "
        "score is better; period: the median of the builds)",
        heads, rows, justify=["right", "left", "left"] + ["right"] * (len(heads) - 3)))
    for caption in (miss_caption(result), night_caption(result)):
        if caption:
            print_wrapped(console, caption, indent="", hang="  ")
    console.print()
    for c in result.candidates:
        _render_candidate(console, req, c)
        if schematics:
            from pulsepick.output.schematic import schematic_lines

            for line in schematic_lines(c.design, c.parts):
                console.print(f"  {line}", markup=False, highlight=False)
            console.print()
        if c.rank == 1:
            _render_waveform(console, c)
    if buylist:
        console.print(f"Buy list of circuit {pick} written to {buylist}", markup=False)
        console.print()
    _render_cautions(console, cautions)


def _spread_cells(c, f) -> list[str]:
    """The builds' median period, P5..P95 and the share within the yield band; before
    assess() the median chip's period and "-"."""
    med = c.median_period_s
    if med is None or not math.isfinite(med):
        return [_eng(f["period_s"], "s"), "-", "-"]
    lo, hi = _eng(c.p5_period_s, "s"), _eng(c.p95_period_s, "s")
    lo_num, _, lo_unit = lo.partition(" ")
    if lo_unit and hi.endswith(" " + lo_unit):
        lo = lo_num
    return [_eng(med, "s"), f"{lo}..{hi}", f"{c.yield_fraction:.0%}"]


def render_detail(console, result, *, buylist: str | None = None, pick: int = 1,
                  only: bool = False) -> None:
    """The full report (every candidate, or only ``pick`` when ``only``), each with its
    schematic."""
    from dataclasses import replace

    if only and result.success:
        if pick > len(result.candidates):
            from pulsepick.errors import RequestError

            raise RequestError(f"--pick {pick}: there are {len(result.candidates)} circuits; "
                               f"choose 1 to {len(result.candidates)}")
        result = replace(result, candidates=(result.candidates[pick - 1],))
    render_report(console, result, buylist=buylist, pick=pick, schematics=True)


def _render_request(console, req, result=None) -> None:
    from pulsepick.analysis.spread import TEMP_RANGE_TEXT
    from pulsepick.output.render import simple_table
    from pulsepick.units import format_eng

    aims = req.aims()
    words = {"period_s": ("period", "s"), "flash_s": ("flash", "s"),
             "led_peak_a": ("peak current", "A"), "effective_a": ("effective current", "A"),
             "effective_mcd": ("effective intensity", "mcd")}
    rows = []
    for key, (value, stated) in aims.items():
        word, unit = words[key]
        text = f"{value:.3g} mcd" if unit == "mcd" else _eng(value, unit)
        how = "asked" if stated else "assumed (not in the request)"
        if key == "flash_s" and req.flash_shortened:
            how = "assumed: a quarter of the period"
        rows.append([word, text, how])
    d = set(req.defaults)

    def mark(*names: str) -> str:
        return "default" if all(n in d for n in names) else "given"

    supply = f"{req.supply_v:g} V" + (f" full .. {req.supply_end_v:g} V end of night"
                                       if req.supply_end_v is not None else " (steady)")
    rows += [
        ["supply", supply, mark("supply")],
        ["chips", ", ".join(req.families), mark("family")],
        ["LED", f"{req.led.name}", mark("led")],
        ["resistors", f"{req.r_series}, timing {format_eng(req.r_min_ohm, 'Ω')} .. "
                      f"{format_eng(req.r_max_ohm, 'Ω')}", mark("series", "min_r", "max_r")],
        ["capacitors", f"{req.c_series}, {format_eng(req.c_min_f, 'F')} .. "
                       f"{format_eng(req.c_max_f, 'F')}", mark("cap_series", "cap_range")],
        ["timing capacitor", ", ".join(req.timing_caps), mark("timing_cap")],
        ["cores", ", ".join(req.cores), mark("cores")],
        ["stages", ", ".join(req.stages), mark("stages")],
        ["buffer gate", {None: "with and without", True: "always", False: "never"}[req.buffered],
         mark("buffered")],
        ["parts drawer", req.stock.source if req.stock else "any standard value",
         mark("stock")],
        ["spread", f"{req.builds:,} builds, seed {req.seed}, {TEMP_RANGE_TEXT}",
         mark("builds", "seed")],
        ["chip thresholds", f"limits read as {req.chip_spread}", mark("chip_spread")],
    ]
    if req.chip_overrides:
        names = {"vt_plus_v": ("VT+", "V"), "vt_minus_v": ("VT-", "V"),
                 "rout_ohm": ("output resistance", "Ω"),
                 "cross_current_a": ("crossing current", "A"), "measured_at_v": ("at", "V")}
        rows.append(["chip measured", ", ".join(
            f"{names.get(k, (k, ''))[0]} {format_eng(v, names.get(k, (k, ''))[1])}"
            for k, v in req.chip_overrides.items() if not isinstance(v, bool)), "given"])
    console.print(simple_table("Request and assumptions", ["", "value", ""], rows))
    crossing = None if result is None else crossing_text(result)
    if crossing:
        _bullet(console, crossing, indent=" ", hang="   ")
    console.print()


def _render_candidate(console, req, c) -> None:
    from pulsepick.output.render import simple_table

    d = c.design
    console.print(f"[bold]#{c.rank}  {d.topo.label()}[/bold] on {d.chip.family}, "
                  f"{d.supply_v:g} V", highlight=False)
    rows = [[p.ref, p.display, p.code, p.series,
             p.tolerance, p.dielectric or "-", p.rating or "-", p.role] for p in c.parts]
    console.print(simple_table(None, ["ref", "value", "code", "series", "tol", "kind",
                                      "rating", "role"], rows))
    for p in c.parts:
        if p.note:
            _bullet(console, f"{p.ref}: {p.note}", indent="    ", hang="      ")
    aims = req.aims()
    ref = c.reference_figures
    rows = []
    for key, word, unit in _FIG_ROWS:
        aim = aims.get(key)
        aim_text = "-" if aim is None else _fig_text(key, aim[0], unit) + \
            ("" if aim[1] else " *")
        err = c.errors.get(key)
        fast = c.figures.get(key)
        refv = None if ref is None else ref.get(key)
        agree = "-"
        if refv is not None and fast is not None and math.isfinite(refv) and \
                math.isfinite(fast) and fast != 0:
            agree = f"{(refv / fast - 1) * 100:+.2f} %"
        rows.append([word, aim_text, _fig_text(key, fast, unit), _pct(err),
                     _fig_text(key, refv, unit) if ref else "-", agree])
    console.print(simple_table(
        "figures of the median chip at the design supply (* assumed aim)",
        ["", "aim", "fast engine", "error", "reference", "ref vs fast"], rows,
        justify=["left", "right", "right", "right", "right", "right"]))
    if c.reference is not None and not c.reference.success:
        _bullet(console, f"reference run: {c.reference.message}", indent="    ", hang="      ")
    _render_spread(console, c, req.targets.period_s)
    _render_drift(console, c)
    extra = list(c.notes) + list(c.warnings)
    if extra:
        console.print("  warnings and notes:")
        for text in extra:
            _bullet(console, text)
    console.print()


def _source_words(key: str) -> str:
    """A spread source in plain words ("chip thresholds", not the key)."""
    from pulsepick.analysis.spread import SOURCE_LABELS

    return SOURCE_LABELS.get(key, key.replace("_", " "))


def _render_spread(console, c, target_s: float | None = None) -> None:
    from pulsepick.output.render import simple_table

    s = c.spread
    if s is None:
        _bullet(console, f"spread estimate (parts only): period ±{c.period_spread * 100:.1f} % "
                         "(one standard deviation)", indent="  ")
        return
    rows = []
    for key, word, unit in (("period_s", "period", "s"), ("flash_s", "flash", "s"),
                            ("led_peak_a", "LED peak", "A"),
                            ("effective_a", "effective current", "A")):
        if key not in s.quantiles:
            continue
        p5, p50, p95 = s.quantiles[key]
        lo, hi = s.corners.get(key, (math.nan, math.nan))
        rows.append([word, _eng(p5, unit), _eng(p50, unit), _eng(p95, unit),
                     f"{_eng(lo, unit)} .. {_eng(hi, unit)}"])
    over = f"{s.builds:,} builds (seed {s.seed}, {s.temp_range_c[0]:g}..{s.temp_range_c[1]:g} °C"
    if s.supply_range_v is not None:
        lo_v, hi_v = s.supply_range_v
        over += f", supply {lo_v:g}..{hi_v:g} V"
    _bullet(console, f"spread over {over}): {s.yield_fraction * 100:.0f} % within "
                     f"±{s.yield_band * 100:.0f} % of the period", indent="", hang="  ")
    console.print(simple_table(None, ["", "P5", "P50", "P95", "corners"], rows,
                               justify=["left", "right", "right", "right", "right"]))
    if s.supply_range_v is not None:
        _bullet(console, "the builds run anywhere in the supply range, so the P50 of the LED "
                         "peak and the currents sits below the nominal figures at the full "
                         "supply", indent="    ", hang="      ")
    shares = sorted(((v, k) for k, v in s.shares.items() if v > 0.005), reverse=True)
    if shares:
        # a no-break space keeps "55 %" on one line when the text wraps
        text = ", ".join(f"{_source_words(k)} {v * 100:.0f}\u00a0%" for v, k in shares)
        _bullet(console, f"period spread comes from: {text}", indent="    ", hang="      ")
    if c.median_note:
        _bullet(console, c.median_note, indent="    ", hang="      ")
    if s.stall_fraction or s.dark_fraction:
        console.print(f"    {s.stall_fraction * 100:.1f} % of builds stall, "
                      f"{s.dark_fraction * 100:.1f} % stay dark", markup=False)
    if c.rank == 1:
        _render_spread_drawing(console, s, target_s)


def _render_spread_drawing(console, s, target_s) -> None:
    """The period of every build as a small histogram (the best circuit only)."""
    from pulsepick.commands.pictures import oscillating_periods
    from pulsepick.output.textplot import spread_lines

    if not s.samples:
        return
    periods, missing = oscillating_periods(s)
    p5, _, p95 = s.quantiles["period_s"]
    if periods.size == 0 or not (math.isfinite(p5) and math.isfinite(p95)):
        return
    from pulsepick.output.render import plot_columns

    for line in spread_lines(periods, p5_s=p5, p95_s=p95, target_s=target_s,
                             yield_band=s.yield_band, not_drawn=missing,
                             width=plot_columns(console)):
        console.print(f"  {line}", markup=False, highlight=False)


def _render_drift(console, c) -> None:
    from pulsepick.output.render import simple_table

    dr = c.drift
    if dr is None:
        return
    rows = []
    for r in dr.rows():
        rows.append([f"{r['supply_v']:.2f} V", _eng(r["period_s"], "s"), _eng(r["flash_s"], "s"),
                     _eng(r["led_peak_a"], "A"), _eng(r["effective_a"], "A"), r["status"]])
    title = (f"through the night: period {dr.period_change_pct:+.1f} % at "
             f"{dr.period_change_to_v:.2f} V")
    console.print(simple_table(title, ["supply", "period", "flash", "peak", "effective",
                                       "status"], rows,
                               justify=["right"] * 5 + ["left"]))
    if dr.dark_below_v is not None:
        console.print(f"    the LED goes dark below {dr.dark_below_v:.2f} V", markup=False)
    if dr.unpowered_below_v is not None:
        console.print(f"    the chip leaves its supply range below {dr.unpowered_below_v:.2f} V",
                      markup=False)
    if getattr(c, "night", None) is not None:
        from pulsepick.commands.solve_summary import night_text

        console.print(f"    on the storage: {night_text(c.night)}", markup=False)


def _render_waveform(console, c) -> None:
    """One period of the best circuit, drawn from its reference run (when available)."""
    import numpy as np

    from pulsepick.output import textplot
    from pulsepick.output.render import plot_columns

    ref = c.reference
    if ref is None or not ref.trace:
        return
    env, _ = c.design.env()
    high = ref.figures.row().get("high_s")
    console.print(f"  one period of #{c.rank} (reference simulation)")
    for line in textplot.waveform_lines(ref.trace["t_s"], ref.trace["vc_v"], ref.trace["led_a"],
                                        vt_plus=float(np.ravel(env.vt_plus)[0]),
                                        vt_minus=float(np.ravel(env.vt_minus)[0]),
                                        high_s=high if high and math.isfinite(high) else None,
                                        width=plot_columns(console)):
        console.print(f"  {line}", markup=False)
    console.print()
