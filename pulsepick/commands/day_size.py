"""``pulsepick day --size --autonomy N``: the panel and storage pair for N nights of
autonomy in the worst month at the latitude (see :mod:`pulsepick.analysis.autonomy`)."""

from __future__ import annotations

import argparse
from datetime import date

from pulsepick.errors import RequestError


def add_size_arguments(parser: argparse.ArgumentParser) -> None:
    """--size and --autonomy."""
    group = parser.add_argument_group("sizing (the panel and storage for the worst month)")
    group.add_argument("--size", action="store_true",
                       help="find the storage and panel for --autonomy nights in the worst "
                            "month at --latitude")
    group.add_argument("--autonomy", metavar="N", default=None,
                       help="nights the storage must last from full with no sun (default 3)")


def run_size(args: argparse.Namespace, storage, panel, diode, night_load_of, day_load: float,
             stop_at: float, clamp: float | None) -> dict:
    """Size the pair; returns the JSON document. ``night_load_of(v_top)`` gives the load."""
    from pulsepick.analysis.autonomy import size_for_autonomy
    from pulsepick.analysis.sky import CLEAR_SKY_INDEX
    from pulsepick.commands import sky_options
    from pulsepick.commands.night_options import degrees, utc_offset

    if args.latitude is None:
        raise RequestError("--size needs --latitude (the worst month is found from the sky "
                           "there); add --date for the year")
    try:
        nights = 3 if args.autonomy is None else int(args.autonomy)
    except ValueError:
        nights = 0
    if not 1 <= nights <= 30:
        raise RequestError(f"--autonomy {args.autonomy!r}: give a whole number of nights "
                           "from 1 to 30, such as 3")
    lat = degrees(args.latitude, "--latitude", 90.0)
    lon = None if args.longitude is None else degrees(args.longitude, "--longitude", 180.0)
    off = None if args.utc_offset is None else utc_offset(args.utc_offset)
    year = date.today().year
    if args.date is not None:
        try:
            year = date.fromisoformat(args.date.strip()).year
        except ValueError as err:
            raise RequestError(f"--date {args.date!r} is not a date; use YYYY-MM-DD such as "
                               "2026-12-21") from err
    site = sky_options.read_site(args, {"latitude_deg": lat, "longitude_deg": lon,
                                        "utc_offset_h": off})
    word = (args.weather or "clear").split(",")[0].strip().lower()
    if word not in CLEAR_SKY_INDEX:
        raise RequestError(f"--weather {args.weather!r}: with --size give one of "
                           f"{', '.join(CLEAR_SKY_INDEX)}")
    v_top = max(storage.v_rated_v, clamp or 0.0, panel.voc_v)
    r = size_for_autonomy(nights, site, year, storage, panel, diode, night_load_of(v_top),
                          v_stop_v=stop_at, clamp_v=clamp, day_load=day_load,
                          clear_sky_index=CLEAR_SKY_INDEX[word], leak_level=args.leakage,
                          turn_on=args.turn_on)
    return {
        "command": "day --size",
        "autonomy_nights_asked": r.nights,
        "worst_date": r.worst_date.isoformat(),
        "night_s": r.night_s,
        "irradiation_wh_m2": r.irradiation_wh_m2,
        "clear_sky_index": r.clear_sky_index,
        "turbidity": site.turbidity,
        "tilt_deg": site.tilt,
        "azimuth_deg": site.azimuth,
        "min_capacitance_f": r.min_capacitance_f,
        "suggested_storage": r.suggested_storage,
        "suggested_storage_name": r.suggested_storage_name,
        "storage_autonomy_nights": r.storage_autonomy_nights,
        "suggested_panel": r.suggested_panel,
        "suggested_panel_name": r.suggested_panel_name,
        "clamp_v": r.clamp_v,
        "assumptions": list(r.notes),
    }


def render_size(doc: dict, console) -> None:
    """The pair in words."""
    from pulsepick.units import format_eng

    c = doc["min_capacitance_f"]
    console.print(f"pulsepick day --size: {doc['autonomy_nights_asked']} night(s) of autonomy "
                  f"in the worst month, {doc['worst_date']} ({doc['night_s'] / 3600:.1f} h "
                  f"night, {doc['irradiation_wh_m2'] / 1e3:.2f} kWh/m² of clear-sky light on "
                  f"the panel)", highlight=False)
    lines = [
        "Smallest storage with the given part's rating and leakage: "
        + ("more than 10 kF" if c is None else format_eng(c, "F")) + ".",
        "Smallest standard supercapacitor: "
        + (f"{doc['suggested_storage_name']} ({doc['suggested_storage']}), "
           f"{doc['storage_autonomy_nights']} night(s)." if doc["suggested_storage"]
           else "none in the storage table lasts that long."),
        "Smallest standard panel that refills it in one such day: "
        + (f"{doc['suggested_panel_name']} ({doc['suggested_panel']})"
           + (f", with a {doc['clamp_v']:.1f} V shunt clamp across the storage"
              if doc["clamp_v"] is not None else "") + "."
           if doc["suggested_panel"] else "none in the panel table; use a larger panel."),
    ]
    for line in lines:
        console.print(line, highlight=False)
    console.print("\nAssumptions:")
    for note in doc["assumptions"]:
        console.print(f" - {note}", highlight=False)
