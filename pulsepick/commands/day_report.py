"""The terminal report of ``pulsepick day``: the setup, the day-by-day table, the verdicts
(nights lasted, days of autonomy, restart in weak light, clamp, equilibrium traps), the
light on the panel, warnings, cautions and assumptions; and the wording they share with
the JSON document."""

from __future__ import annotations

import math
import re

from pulsepick.analysis.cautions import GENERAL_CAUTIONS
from pulsepick.analysis.day import DaysResult
from pulsepick.output.render import simple_table

SHAPES_NOTE = ("light: the --profile file, or an illustrative day shape that is the same in "
               "every season; --latitude with --date (and no --profile) gives the clear sky of "
               "a place and date")


def clock(seconds: float | None) -> str:
    """Seconds after midnight as HH:MM (wrapping at 24 h); '-' for None."""
    if seconds is None or not math.isfinite(seconds):
        return "-"
    m = round(seconds / 60.0) % (24 * 60)
    return f"{m // 60:02d}:{m % 60:02d}"


def hours(seconds: float | None) -> str:
    """A duration as '7.5 h' or '45 min'."""
    if seconds is None:
        return "-"
    if seconds < 3600:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


def _full_at(result: DaysResult, seconds: float | None, row=None) -> str | None:
    if seconds is None:
        return None
    dawn = result.night.dawn_s if row is None or math.isnan(row.dawn_s) else row.dawn_s
    return clock(dawn + seconds)


def _dusk_of(result: DaysResult, row) -> float:
    """The row's own dusk (clock seconds), or the run's window's."""
    return result.night.dusk_s if math.isnan(row.dusk_s) else row.dusk_s


def _v(x: float) -> str:
    return f"{x:.2f}"


def _eng(x: float, unit: str) -> str:
    """A charge (C) or energy (J) in engineering notation: 9.77 C, 150 mC, 1.14 kC."""
    from pulsepick.units import format_figure

    return format_figure(x, unit)


def full_v(result: DaysResult) -> float:
    """The voltage that counts as full (V): the clamp's, or else the storage's rating."""
    clamp = result.path.clamp_v
    return clamp if clamp is not None else result.storage.v_rated_v


def full_is(result: DaysResult) -> str:
    """What full means in this run: "clamp" or "rated voltage"."""
    return "clamp" if result.path.clamp_v is not None else "rated voltage"


def _full_note(result: DaysResult) -> str:
    """The line under the table that says what "full at" means."""
    if result.path.clamp_v is not None:
        return (f"full at: the time the storage first reaches the clamp voltage "
                f"{full_v(result):.2f} V.")
    text = (f"full at: the time the storage first reaches its rated {full_v(result):.2f} V "
            "(there is no clamp)")
    if any(r.v_max_v > result.storage.v_rated_v + 0.005 for r in result.rows):
        text += "; it keeps charging above the rating, up to the max V shown"
    return text + "."


# Column names of the panel table (data/parts/panels.csv) as words, for the notes shown.
_PANEL_WORDS = {"n": "ideality factor", "r_s": "series resistance", "r_sh": "shunt resistance",
                "voc": "Voc", "isc": "Isc"}


def _panel_notes(notes: str) -> str:
    """The panel's source notes with column names written as words."""
    def words(match: re.Match) -> str:
        names = [_PANEL_WORDS[n] for n in match[0].split()]
        return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]

    text = re.sub(r"\b(?:n|r_sh|r_s)(?:\s+(?:n|r_sh|r_s))*\b", words, notes)
    text = re.sub(r"\b(voc|isc)\b", lambda m: _PANEL_WORDS[m[1]], text)
    return re.sub(r"(and shunt resistance) estimate\b", r"\1: estimates", text)


def assumption_lines(result: DaysResult) -> list[str]:
    """The run's assumptions with the panel and bleed figures in engineering notation."""
    from pulsepick.units import format_eng

    p = result.path.panel
    bleed = result.path.bleed_ohm
    out = []
    for line in result.assumptions:
        if line.startswith(f"panel {p.name}:"):
            line = (f"panel {p.name}: single-diode model; Voc {format_eng(p.voc_v, 'V')} and "
                    f"Isc {format_eng(p.isc_a, 'A')} at 1000 W/m²; {p.cells} cells; ideality "
                    f"factor {p.n:g}, series resistance {format_eng(p.r_s_ohm, 'Ω')}, shunt "
                    f"resistance {format_eng(p.r_sh_ohm, 'Ω')} ({_panel_notes(p.source_notes)})")
        elif line.startswith("the dusk detector's bleed") and math.isfinite(bleed):
            line = f"the dusk detector's bleed {format_eng(bleed, 'Ω')} takes panel current by day"
        out.append(line)
    return out


def render_report(result: DaysResult, night_info: dict, console, sky=None,
                  notes=()) -> None:
    """Print the report: setup, the day-by-day table, verdicts, warnings and cautions."""
    from rich.text import Text

    s = result.storage
    console.print(Text(f"pulsepick day: {len(result.rows)} day(s) on {s.name}", style="bold"))
    _render_setup(console, result, night_info)
    _render_days(console, result)
    _render_verdicts(console, result)
    if sky is not None:
        totals = sky.irradiation_wh_m2
        lo, hi = f"{min(totals) / 1e3:.2f}", f"{max(totals) / 1e3:.2f}"
        console.print(f"Light on the panel: {lo if lo == hi else f'{lo} to {hi}'} "
                      f"kWh/m² a day (clear sky times each day's index; tilt {sky.site.tilt:g}°, "
                      f"azimuth {sky.site.azimuth:g}°, turbidity {sky.site.turbidity:g}).")
        line = sky.sensitivity_line()
        if line is not None:
            console.print(line)
    for note in notes:
        console.print(note)
    warnings = list(result.warnings)
    if night_info.get("night_note"):
        warnings.append(night_info["night_note"])
    _list(console, "Warnings", warnings)
    _list(console, "Cautions", list(result.cautions) + list(GENERAL_CAUTIONS))
    _list(console, "Assumptions", assumption_lines(result) + ([SHAPES_NOTE] if sky is None else
                                                              sky.lines()))


def _render_setup(console, result: DaysResult, night_info: dict) -> None:
    """The storage, the panel, the charge path, the night and the loads."""
    s, p, path = result.storage, result.path.panel, result.path
    w = result.night
    n_load = result.night_load
    d_load = float(result.day_load.supply_avg_a.max())
    setup = [
        ["storage", f"{s.capacitance_f:g} F, rated {s.v_rated_v:g} V; start "
                    f"{result.v_start_v:.2f} V"
                    f" at the first dawn; the light stops at {result.v_stop_v:.2f} V"],
        ["panel", f"{p.name}: Voc {p.voc_v:g} V, Isc {p.isc_a * 1e3:g} mA at 1000 W/m2"],
        ["charge path", f"{path.diode.name}"
                        + (f", clamp {path.clamp_v:.2f} V" if path.clamp_v is not None else
                           ", no clamp")
                        + ("" if math.isinf(path.bleed_ohm) else
                           f", bleed {_ohms(path.bleed_ohm)} across the panel")],
        ["night", f"{hours(w.night_s)}, dusk {clock(w.dusk_s)}, dawn {clock(w.dawn_s)}"
                  + (f" ({night_info['date']}, latitude {night_info['latitude_deg']:g}, "
                     f"{night_info['turn_on']} turn-on)"
                     if night_info.get("given") == "sun" else "") + _nights_range(result)],
        ["loads", f"night {_night_load_text(n_load)}; day {_amps(d_load)}"],
    ]
    console.print(key_value_table(setup))
    console.print()


def _render_days(console, result: DaysResult) -> None:
    """The day-by-day table, what "full at" means and the nights lasted."""
    rows = []
    for r in result.rows:
        rows.append([
            str(r.day), r.weather, _v(r.v_dawn_v),
            ("at dawn" if r.time_to_full_s == 0 else _full_at(result, r.time_to_full_s, r))
            if r.full else "not full", _v(r.v_max_v), _v(r.v_dusk_v),
            _eng(r.charge_in_c, "C"), _eng(r.energy_in_j, "J"), _eng(r.charge_clamp_c, "C"),
            "all night" if r.lasted else (hours(r.runtime_s) if r.runtime_s > 0 else "no light"),
            _v(r.v_next_dawn_v),
        ])
    table = simple_table(
        "Day by day",
        ["day", "weather", "dawn V", "full at", "max V", "dusk V", "charge in", "energy in",
         "clamp took", "light ran", "next V"],
        rows, justify=["right", "left"] + ["right"] * 9)
    table.padding = (0, 1, 0, 0)  # two spaces between columns: the eleven fit in 100
    console.print(table)
    console.print(_full_note(result))
    if any(r.charge_in_c < 0 for r in result.rows):
        console.print("charge in below zero: on that day the diode's reverse leakage back "
                      "into the panel took more than the light gave.")
    console.print(f"Nights lasted: {result.nights_lasted} of {len(result.rows)}.")


def _render_verdicts(console, result: DaysResult) -> None:
    """Days of autonomy, the restart in weak light, the clamp and any equilibrium trap."""
    s, path = result.storage, result.path
    if result.autonomy_nights is not None:
        more = " or more" if result.autonomy_capped else ""
        full_v = path.clamp_v if path.clamp_v is not None else s.v_rated_v
        console.print(f"Days of autonomy: from full ({full_v:.2f} V) with no sun at all, the "
                      f"light lasts {result.autonomy_nights}{more} "
                      f"full night(s).")
    rec = result.recovery
    if rec is not None:
        if rec.never_restarts:
            verdict = (f"never restarts after a dark day: in {rec.weather} light the panel gives "
                       f"at most {rec.panel_voc_v:.2f} V, minus {rec.diode_drop_v:.2f} V for the "
                       f"diode, under the {result.v_stop_v:.2f} V the light needs")
        elif rec.restarts:
            settle = min(rec.v_eq_v, path.clamp_v if path.clamp_v is not None else math.inf)
            verdict = (f"restarts from empty in {rec.weather} light: "
                       f"{rec.v_dusk_from_empty_v:.2f} V "
                       f"at dusk after one such day (it settles towards {settle:.2f} V)")
        else:
            verdict = (f"does not restart from empty in one {rec.weather} day: "
                       f"{rec.v_dusk_from_empty_v:.2f} V at dusk, under {result.v_stop_v:.2f} V"
                       + (f"; in that light it can never pass {rec.v_eq_v:.2f} V (charge = draw)"
                          if rec.v_eq_v <= result.v_stop_v else ""))
        console.print(f"Weak light: {verdict}.")
    if path.clamp_v is not None and result.clamp_at_isc_w is not None:
        peak = max((r.charge_clamp_c for r in result.rows), default=0.0)
        console.print(f"Clamp {path.clamp_v:.2f} V: absorbs up to {_eng(peak, 'C')} a day; at the "
                      f"panel's full-sun Isc it dissipates {result.clamp_at_isc_w * 1e3:.0f} mW "
                      "(size its power rating for that).")
    traps = {r.weather: r.v_eq_v for r in result.rows if r.v_eq_v < result.v_stop_v}
    if traps:
        where = ", ".join(f"{w} days at {v:.2f} V" for w, v in traps.items())
        console.print(f"Equilibrium trap: the charge equals the draw on {where}, under the stop "
                      f"voltage {result.v_stop_v:.2f} V: in that light the storage cannot pass it.")


def _nights_range(result: DaysResult) -> str:
    """How the nights of a run change with the dates ('' when they are all alike)."""
    lengths = [r.night_s for r in result.rows if math.isfinite(r.night_s)]
    if len(lengths) < 2 or hours(min(lengths)) == hours(max(lengths)):
        return ""
    last = result.rows[-1]
    return (f"; each date its own: the last night {hours(last.night_s)}, dusk "
            f"{clock(last.dusk_s)} (nights {hours(min(lengths))} to {hours(max(lengths))})")


def key_value_table(rows: list[list[str]]):
    """Two columns, no header: a name and its value (wraps under the value)."""
    from rich.table import Table

    table = Table.grid(padding=(0, 2))
    table.add_column(no_wrap=True)
    table.add_column()
    for row in rows:
        table.add_row(*row)
    return table


def _list(console, title: str, items) -> None:
    """A titled list whose long items wrap under their own text."""
    from rich.table import Table

    items = list(items)
    if not items:
        return
    console.print(f"\n{title}:")
    table = Table.grid(padding=(0, 1))
    table.add_column(no_wrap=True)
    table.add_column()
    for item in items:
        table.add_row(" -", item)
    console.print(table)


print_list = _list


def _night_load_text(load) -> str:
    """A constant load as its current; a circuit as its label and current range."""
    currents = load.supply_avg_a
    if float(currents.min()) == float(currents.max()):
        return _amps(float(currents.max()))
    volts = load.supply_v
    return (f"{load.label} (average supply current {_amps(float(currents.min()))} to "
            f"{_amps(float(currents.max()))} over storage voltages {float(volts.min()):.2f} V "
            f"to {float(volts.max()):.2f} V)")


def _amps(value: float) -> str:
    from pulsepick.units import format_eng

    return format_eng(value, "A") if value > 0 else "0 A"


def _ohms(value: float) -> str:
    from pulsepick.units import format_eng

    return format_eng(value, "Ω")

