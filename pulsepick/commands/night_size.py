"""``pulsepick night --size``: the storage, or the load, that lasts until dawn.

Answers for the night's design, date and place (see :mod:`pulsepick.analysis.sizing`):
the smallest capacitance with a margin and the smallest standard supercapacitor that
lasts, the largest average load the given storage carries, and, with ``--date-range`` or
``--year``, the date of the range's longest night that all of it is sized for.
"""

from __future__ import annotations

import argparse
import math
from datetime import date

from pulsepick.analysis.sizing import DEFAULT_MARGIN, SizeResult, longest_night, size_for_night
from pulsepick.errors import RequestError


def add_size_arguments(parser: argparse.ArgumentParser) -> None:
    """--size, --margin, --date-range, --year."""
    group = parser.add_argument_group("sizing (the solve-back for energy)")
    group.add_argument("--size", action="store_true",
                       help="answer what storage lasts until dawn with a margin, and the "
                            "largest average load the given storage carries")
    group.add_argument("--margin", metavar="PCT", default=None,
                       help=f"extra night to last, such as 30%% (default "
                            f"{DEFAULT_MARGIN * 100:.0f}%%)")
    group.add_argument("--date-range", metavar="FIRST..LAST",
                       help="size for the longest night between two dates (needs --latitude)")
    group.add_argument("--year", metavar="YYYY",
                       help="size for the longest night of a year (needs --latitude)")


def read_margin(text: str | None) -> float:
    """``20%`` or ``0.2`` to a fraction."""
    if text is None:
        return DEFAULT_MARGIN
    t = str(text).strip()
    try:
        value = float(t[:-1]) / 100.0 if t.endswith("%") else float(t)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and 0.0 <= value <= 5.0):
        raise RequestError(f"--margin {text!r}: give a percentage from 0% to 500%, such as 20%")
    return value


def _dates(args: argparse.Namespace) -> tuple[date, date] | None:
    if args.date_range is not None and args.year is not None:
        raise RequestError("give the dates one way: --date-range FIRST..LAST or --year YYYY")
    if args.year is not None:
        try:
            year = int(args.year)
        except ValueError:
            year = 0
        if not 1900 <= year <= 2200:
            raise RequestError(f"--year {args.year!r}: give a year such as 2026")
        return date(year, 1, 1), date(year, 12, 31)
    if args.date_range is not None:
        parts = str(args.date_range).split("..")
        try:
            first, last = (date.fromisoformat(p.strip()) for p in parts)
        except ValueError:
            raise RequestError(f"--date-range {args.date_range!r}: give two dates as "
                               "FIRST..LAST, such as 2026-10-01..2027-03-31") from None
        return first, last
    return None


def apply_date_range(args: argparse.Namespace) -> dict | None:
    """With --date-range or --year: set ``args.date`` to the longest night's date.

    Returns ``{"worst_date": date, "first": date, "last": date}`` or None.
    """
    span = _dates(args)
    if span is None:
        return None
    if not args.size:
        raise RequestError("--date-range and --year go with --size (the longest night)")
    if args.latitude is None:
        raise RequestError("--date-range and --year need --latitude (the sun's times)")
    # the range replaces a single date (from the options or a design file's [site])
    from pulsepick.commands.night_options import degrees, utc_offset

    lat = degrees(args.latitude, "--latitude", 90.0)
    lon = None if args.longitude is None else degrees(args.longitude, "--longitude", 180.0)
    off = None if args.utc_offset is None else utc_offset(args.utc_offset)
    worst, _ = longest_night(lat, span[0], span[1], lon, off, args.turn_on)
    args.date = worst.isoformat()
    return {"worst_date": worst, "first": span[0], "last": span[1]}


def run_size(args, storage, v_start: float, stop_at: float | None, load, night: dict,
             options: dict, dates: dict | None) -> SizeResult:
    """Size for the night given (``night["duration_s"]``)."""
    if night.get("duration_s") is None:
        raise RequestError("--size needs a night: --night 12.5h, --dusk with --dawn, or "
                           "--latitude with --date (or a date range)")
    worst = None
    if dates is not None:
        worst = dates["worst_date"]
    elif night.get("date"):
        worst = date.fromisoformat(night["date"])
    return size_for_night(storage, v_start, night["duration_s"], load, stop_at_v=stop_at,
                          margin=read_margin(args.margin), worst_date=worst, **options)


def size_json(r: SizeResult, night: dict, dates: dict | None) -> dict:
    """The JSON document of a sizing run (units in the key names)."""
    return {
        "command": "night --size",
        "night_s": r.night_s,
        "margin": r.margin,
        "target_s": r.target_s,
        "worst_date": None if r.worst_date is None else r.worst_date.isoformat(),
        "date_range": None if dates is None else [dates["first"].isoformat(),
                                                  dates["last"].isoformat()],
        "v_start_v": r.v_start_v,
        "v_stop_v": r.v_stop_v,
        "storage": r.storage_key,
        "lasts_now": r.lasts_now,
        "min_capacitance_f": r.min_capacitance_f,
        "suggested_storage": r.suggested_storage,
        "suggested_storage_name": r.suggested_name,
        "max_average_load_a": r.max_average_load_a,
        "assumptions": list(r.notes),
    }


def render_size(r: SizeResult, console, dates: dict | None) -> None:
    """The sizing answers in words."""
    from pulsepick.units import format_eng

    h = r.night_s / 3600.0
    when = ""
    if r.worst_date is not None:
        when = f" on {r.worst_date.isoformat()}"
        if dates is not None:
            when += (f" (the longest night between {dates['first'].isoformat()} and "
                     f"{dates['last'].isoformat()})")
    console.print(f"pulsepick night --size: a {h:.2f} h night{when}, plus {r.margin:.0%}",
                  highlight=False)
    c = ("more than 10 kF" if r.min_capacitance_f is None
         else format_eng(r.min_capacitance_f, "F"))
    lines = [
        f"Smallest storage that lasts until dawn with the margin: {c} (from {r.v_start_v:.2f} V "
        f"down to {r.v_stop_v:.2f} V).",
        ("Smallest standard supercapacitor that does: "
         + (f"{r.suggested_name} ({r.suggested_storage})." if r.suggested_storage else
            "none in the storage table; use several in parallel or a larger part.")),
        f"The given storage {r.storage_key} "
        + ("lasts" if r.lasts_now else "does not last") + " the night with the margin.",
        f"Largest average load it carries to dawn: {format_eng(r.max_average_load_a, 'A')}.",
    ]
    for line in lines:
        console.print(line, highlight=False)
    console.print("\nAssumptions:")
    for note in r.notes:
        console.print(f" - {note}", highlight=False)
