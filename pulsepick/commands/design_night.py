"""What a design file says about the night and the charge path, for every command.

``solve``, ``night`` and ``day`` read the same ``[site]`` or ``[night]`` table and the same
``[storage]`` and ``[panel]``: the real night length wherever the file gives a place and a
date, and the over-voltage caution with a sized clamp wherever the panel can push the
storage past its rating.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, timedelta

from pulsepick.errors import RequestError
from pulsepick.solve.nightcheck import DEFAULT_NIGHT_S  # when the file gives no night


@dataclass(frozen=True)
class DesignNight:
    """The night of a design file."""

    night_s: float  # s, dusk to dawn
    text: str  # the night in words, for the reports
    given: str  # "site", "length", "clock" or "default"
    dusk: datetime | None = None  # when known
    note: str | None = None  # a polar or white-night note from the sun's times


def _hm(seconds: float) -> str:
    m = round(seconds / 60.0)
    return f"{m // 60} h {m % 60:02d} min"


def design_night(design) -> DesignNight:
    """The night of ``[site]`` (sun times), ``[night]`` (length or clock), or 12 h."""
    from pulsepick.units import parse_quantity

    if design.site is not None:
        from pulsepick.analysis.sun import night_span

        s = design.site
        try:
            day = date.fromisoformat(str(s["date"]).strip())
        except ValueError as err:
            raise RequestError(f"{design.path}: [site] date {s['date']!r} is not a date; use "
                               "YYYY-MM-DD such as \"2026-12-21\"") from err
        span = night_span(float(s["latitude"]), day, s.get("longitude"), s.get("utc_offset"),
                          s.get("turn_on", "civil"))
        text = (f"{_hm(span.night_s)} night ({span.rule} {span.dusk:%H:%M} to "
                f"{span.dawn:%H:%M}, {day.isoformat()} at latitude {float(s['latitude']):g})")
        return DesignNight(span.night_s, text, "site", span.dusk, span.note)
    n = design.night
    if n is not None:
        if "length" in n:
            length = parse_quantity(n["length"], "time", bare_ok=True)
            return DesignNight(length, f"{_hm(length)} night (the file's length)", "length")
        if "dusk" in n and "dawn" in n:
            from pulsepick.commands.night_options import clock_time

            h1, m1 = clock_time(n["dusk"], "[night] dusk")
            h2, m2 = clock_time(n["dawn"], "[night] dawn")
            dusk = datetime(2000, 1, 1, h1, m1)
            dawn = datetime(2000, 1, 1, h2, m2)
            if dawn <= dusk:
                dawn += timedelta(days=1)
            length = (dawn - dusk).total_seconds()
            return DesignNight(length, f"{_hm(length)} night ({n['dusk']} to {n['dawn']})",
                               "clock", dusk)
    return DesignNight(DEFAULT_NIGHT_S, f"{DEFAULT_NIGHT_S / 3600:g} h night (the file gives "
                       "no [site] or [night])", "default")


def design_clamp(design):
    """The over-voltage advice for the file's panel and storage (None without both)."""
    if design is None or design.panel is None or design.storage is None:
        return None
    from pulsepick.analysis.overvoltage import clamp_advice
    from pulsepick.designfile import panel_part, storage_part
    from pulsepick.parts.diode import DIODE_KEYS, get_diode
    from pulsepick.units import parse_quantity

    diode = str(design.panel.get("diode", "schottky")).strip().lower()
    if diode not in DIODE_KEYS:
        raise RequestError(f"{design.path}: [panel] diode {diode!r} unknown; accepted: "
                           f"{', '.join(DIODE_KEYS)}")
    clamp = design.panel.get("clamp")
    clamp_v = None if clamp is None else parse_quantity(clamp, "voltage", bare_ok=True)
    start = design.storage.get("start")
    start_v = None if start is None else parse_quantity(start, "voltage", bare_ok=True)
    return clamp_advice(storage_part(design), panel_part(design), get_diode(diode), clamp_v,
                        start_v)
