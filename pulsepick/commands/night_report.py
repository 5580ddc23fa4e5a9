"""The terminal report of ``pulsepick night``: the verdict, the night, the storage and
its drains, the figures over the night, a plain-character chart, warnings, assumptions and
cautions."""

from __future__ import annotations

import math
from datetime import datetime, timedelta

import numpy as np
from rich.table import Table as RichTable
from rich.text import Text

from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT
from pulsepick.analysis.night import NightResult
from pulsepick.commands.wording import duration_text, verdict
from pulsepick.output.render import plot_columns, simple_table


def _hm(moment: datetime | None) -> str | None:
    return None if moment is None else moment.strftime("%H:%M")


def _eng(value: float | None, unit: str) -> str:
    from pulsepick.units import format_figure

    return format_figure(value, unit)


def _bullets(console, title: str, items, mark: str) -> None:
    """A titled list with hanging indents (wraps cleanly at 100 columns)."""
    console.print(Text(title, style="bold"))
    grid = RichTable.grid(padding=(0, 1))
    grid.add_column(width=3, justify="right")
    grid.add_column(ratio=1)
    for item in items:
        grid.add_row(mark, Text(item))
    console.print(grid)
    console.print()


def render_report(result: NightResult, night: dict, console,
                  context: dict | None = None) -> None:
    """The terminal report: verdict, night, storage, drains, figures, chart, cautions.

    ``context`` is the command's extra knowledge (see
    :func:`pulsepick.commands.night.result_json`).
    """
    context = context or {}
    open_ended = night["given"] == "none"
    good = result.lasts_the_night
    console.print(Text(f"night: {verdict(result, open_ended)}",
                       style="bold green" if good else "bold red"))
    console.print()

    _render_facts(console, result, night, context, open_ended)
    _render_figures(console, result)

    for line in night_chart(result, night["dusk"], plot_columns(console, _LABEL + 12)):
        console.print(Text(line))
    console.print()

    if result.warnings:
        _bullets(console, "Warnings", result.warnings, "!")
    _bullets(console, "Assumptions", result.assumptions, "-")
    cautions = list(result.cautions)
    if NOT_A_SAFETY_LIGHT not in cautions:
        cautions.append(NOT_A_SAFETY_LIGHT)
    _bullets(console, "Cautions", cautions, "*")


def _render_facts(console, result: NightResult, night: dict, context: dict,
                  open_ended: bool) -> None:
    """The night, the storage, the voltages, the energy, the circuit and the drains."""
    if open_ended:
        window = "none given: the run goes on until the stop voltage"
    elif night["dusk"] is not None:
        window = (f"{_hm(night['dusk'])} to {result.dawn_clock}, "
                  f"{duration_text(result.duration_s)}")
    else:
        window = duration_text(result.duration_s)
    if night["given"] == "sun":
        turn_on = "civil dusk" if night["turn_on"] == "civil" else "sunset"
        place = f"{abs(night['latitude_deg']):g}° {'N' if night['latitude_deg'] >= 0 else 'S'}"
        window += f" (light on at {turn_on}, {place}, evening of {night['date']})"
    s = result.storage
    band = result.load.lit_band_v() if result.load is not None else None
    if not math.isfinite(result.v_stop_v) and band is not None:
        stop = f"over the circuit's supply range (lit {band[0]:.2f} V to {band[1]:.2f} V)"
    elif not math.isfinite(result.v_stop_v):
        stop = "not lit at any supply of the circuit's curve"
    elif result.v_stop_v > 0:
        stop = f"stop {result.v_stop_v:.2f} V"
    else:
        stop = "no stop voltage"
    rows = [
        ["night", window],
        ["storage", f"{s.name}: {_eng(result.capacitance_f, 'F')}, rated {s.v_rated_v:.2f} V"
                    + (" (default)" if context.get("rated_default") else "")
                    + f", ESR {_eng(s.esr_ohm, 'Ω')}"],
        ["voltage", f"start {result.v_start_v:.2f} V, {stop}, end {result.v_end_v:.2f} V"],
        ["energy", f"{_eng(result.energy_used_j, 'J')} used, usable energy fraction "
                   f"{result.usable_energy_fraction:.3f}"],
        ["circuit", result.load.label if result.load is not None else "none (bare budget)"],
    ]
    if result.load is not None and any(math.isfinite(p.period_s) for p in result.figures):
        rows.append(["flashes", f"{result.flashes:,.0f} over {duration_text(result.runtime_s)}"])
    shares = result.shares()
    drains = []
    for label, key, charge in (("circuit", "circuit", result.charge_circuit_c),
                               ("storage leakage", "storage_leakage", result.charge_leak_c),
                               ("extra load", "extra_load", result.charge_extra_c)):
        if (key == "circuit" and result.load is None) or (key == "extra_load" and not charge):
            continue
        share = shares[key]
        drains.append(f"{label} {_eng(charge, 'C')}"
                      + (f" ({share:.0%})" if math.isfinite(share) else ""))
    rows.append(["drain", ", ".join(drains)])
    dusk_entry = context.get("dusk_detector") or {}
    if dusk_entry.get("top"):
        rows.append(["dusk detector", dusk_entry["top"]])
    facts = RichTable.grid(padding=(0, 2))
    facts.add_column(style="bold")
    facts.add_column(ratio=1)
    for label, text in rows:
        facts.add_row(label, Text(text))
    console.print(facts)
    console.print()


def _render_figures(console, result: NightResult) -> None:
    """The figures over the night (dusk, midnight, dawn ...), when there is a circuit."""
    if result.load is not None:
        fig_rows = []
        for p in result.figures:
            when = p.clock or duration_text(p.t_s)
            if p.lit:
                fig_rows.append([p.label, when, f"{p.v_v:.2f} V", _eng(p.period_s, "s"),
                                 _eng(p.flash_s, "s"), _eng(p.led_peak_a, "A"),
                                 _eng(p.effective_a, "A"), _eng(p.effective_cd, "cd")])
            else:
                fig_rows.append([p.label, when, "-", "off", "", "", "", ""])
        heads = ["", "time", "storage", "period", "flash", "LED peak", "effective",
                 "intensity"]
        justify = ["left"] * 2 + ["right"] * 6
        if not any(p.lit and math.isfinite(p.effective_cd) for p in result.figures):
            # no LED intensity data: the column would be "-" on every row
            heads, justify, fig_rows = heads[:-1], justify[:-1], [r[:-1] for r in fig_rows]
        console.print(simple_table("Over the night", heads, fig_rows, justify=justify))
        console.print()


# ---------------------------------------------------------------------------- chart

CHART_COLUMNS = 72  # plot columns; with the labels the chart fits in 100
_VOLT_ROWS = 8
_LIGHT_ROWS = 4
_LABEL = 11  # width of the row labels


def night_chart(result: NightResult, dusk: datetime | None,
                cols: int = CHART_COLUMNS) -> list[str]:
    """A plain-character chart of the storage voltage and the light over the night,
    ``cols`` plot columns wide."""
    tl = result.timeline
    t_cols = np.linspace(0.0, result.duration_s, cols)
    runtime = result.duration_s if result.lasts_the_night else result.runtime_s
    on = t_cols <= runtime + 1e-9
    finite = np.isfinite(tl.v_v)
    v_cols = np.full(cols, math.nan)
    if finite.sum() >= 2:
        v_cols[on] = np.interp(t_cols[on], tl.t_s[finite], tl.v_v[finite])
    else:
        v_cols[0] = result.v_start_v
    has_stop = 0 < result.v_stop_v < math.inf
    v_hi = result.v_start_v
    v_lo = float(np.nanmin(v_cols))
    if has_stop:
        v_lo = min(v_lo, result.v_stop_v)
    if not v_hi - v_lo > 1e-3:
        v_lo = v_hi - 0.1
    pad = 0.04 * (v_hi - v_lo)
    v_lo, v_hi = v_lo - pad, v_hi + pad

    def row_of(v: float) -> int:
        frac = (v - v_lo) / (v_hi - v_lo)
        return round((1 - frac) * (_VOLT_ROWS - 1))

    grid = [[" "] * cols for _ in range(_VOLT_ROWS)]
    stop_row = row_of(result.v_stop_v) if has_stop else -1
    if has_stop:
        for j in range(0, cols, 2):
            grid[stop_row][j] = "-"
    for j in range(cols):
        if math.isfinite(v_cols[j]):
            grid[row_of(v_cols[j])][j] = "*"
    if not result.lasts_the_night:
        j_stop = int(min(cols - 1, round(runtime / result.duration_s * (cols - 1))))
        grid[stop_row if has_stop else _VOLT_ROWS - 1][j_stop] = "X"

    title = "Storage voltage" + (" and light" if result.load is not None else "")
    lines = [title + (" over the night" if dusk is not None or result.lasts_the_night
                      else " over the run")]
    for i, row in enumerate(grid):
        label = ""
        if i in (0, _VOLT_ROWS - 1, (_VOLT_ROWS - 1) // 2):
            label = f"{v_hi - (v_hi - v_lo) * i / (_VOLT_ROWS - 1):.2f} V"
        if i == stop_row:
            label = f"stop {result.v_stop_v:.2f}"
        lines.append(f"{label:>{_LABEL}} |{''.join(row)}".rstrip())

    light = _light_columns(result, v_cols)
    if light is not None:
        values, unit = light
        top = float(np.nanmax(values))
        lines.append(f"{'':>{_LABEL}} |")
        levels = np.where(np.isfinite(values), values / top, 0.0)
        for i in range(_LIGHT_ROWS):
            threshold = (_LIGHT_ROWS - i - 0.5) / _LIGHT_ROWS
            bar = "".join("#" if lv >= threshold else " " for lv in levels)
            label = _eng(top, unit) if i == 0 else ("light" if i == 1 else "")
            lines.append(f"{label:>{_LABEL}} |{bar}".rstrip())
    lines.append(f"{'':>{_LABEL}} +{_axis(cols)}")
    lines.append(" " * (_LABEL + 1) + _axis_labels(result.duration_s, dusk, cols))
    legend = ["* storage voltage"]
    if has_stop:
        legend.append("- - stop voltage")
    if not result.lasts_the_night:
        legend.append("X the light stops" if result.load is not None else "X stop")
    if light is not None:
        legend.append("# effective brightness")
    lines.append(" " * (_LABEL + 1) + ", ".join(legend))
    return lines


def _light_columns(result: NightResult, v_cols):
    """Effective intensity (cd) or effective current (A) along the chart, or None."""
    load = result.load
    if load is None:
        return None
    ok = np.isfinite(v_cols)
    for table, unit in ((load.effective_cd, "cd"), (load.effective_a, "A")):
        values = np.full(len(v_cols), math.nan)
        values[ok] = np.interp(v_cols[ok], load.supply_v, table)
        if np.any(np.isfinite(values)) and np.nanmax(values) > 0:
            return values, unit
    return None


def _tick_columns(cols: int, ticks: int = 5) -> list[int]:
    return [round(k * (cols - 1) / (ticks - 1)) for k in range(ticks)]


def _axis(cols: int) -> str:
    chars = ["-"] * cols
    for j in _tick_columns(cols)[1:]:
        chars[j] = "+"
    return "".join(chars)


def _axis_labels(duration_s: float, dusk: datetime | None, cols: int) -> str:
    width = cols + 6
    out = [" "] * width
    ticks = _tick_columns(cols)
    for k, j in enumerate(ticks):
        t = duration_s * k / (len(ticks) - 1)
        if dusk is not None:
            text = (dusk + timedelta(seconds=round(t / 60) * 60)).strftime("%H:%M")
        else:
            text = f"{t / 3600:.3g} h"
        start = max(0, min(j - len(text) // 2, width - len(text)))
        out[start:start + len(text)] = text
    return "".join(out).rstrip()
