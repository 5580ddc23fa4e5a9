"""Sky options shared by ``day`` (and the sizing runs): turbidity, the panel's tilt and
azimuth, the site's altitude, and weather as clear-sky indices per day.

With ``--latitude`` and ``--date`` the day's light is the clear sky of that place and date
(:mod:`pulsepick.analysis.sky`) times a clear-sky index per day; without them the
illustrative profile shapes are used as before.
"""

from __future__ import annotations

import argparse
import math
from dataclasses import dataclass
from datetime import date, timedelta

from pulsepick.analysis.irradiance import Profile
from pulsepick.analysis.sky import (
    CLEAR_SKY_INDEX,
    DEFAULT_TURBIDITY,
    LOW_SUN_DEG,
    TURBIDITY_RANGE,
    Site,
    daily_irradiation_wh_m2,
    day_profile,
    highest_elevation_deg,
    load_index_csv,
)
from pulsepick.errors import RequestError

SKY_OPTIONS = ("turbidity", "tilt", "azimuth", "altitude", "sky_index")


def add_sky_arguments(parser: argparse.ArgumentParser) -> None:
    """--turbidity, --tilt, --azimuth, --altitude and --sky-index."""
    group = parser.add_argument_group(
        "the sky (with --latitude and --date: clear-sky light of that place and date)")
    group.add_argument("--turbidity", metavar="TL",
                       help=f"Linke turbidity of the air, {TURBIDITY_RANGE[0]:g} to "
                            f"{TURBIDITY_RANGE[1]:g} (default {DEFAULT_TURBIDITY:g}, a typical "
                            "rural sky; 2 clean, 5 hazy)")
    group.add_argument("--tilt", metavar="DEG",
                       help="the panel's tilt from horizontal in degrees (default: the "
                            "latitude's size)")
    group.add_argument("--azimuth", metavar="DEG",
                       help="the way the panel faces, degrees from north through east, 180 "
                            "south (default: facing the equator)")
    group.add_argument("--altitude", metavar="M", help="the site's height above sea level in "
                                                        "metres (default 0)")
    group.add_argument("--sky-index", metavar="FILE.csv",
                       help="daily clear-sky indices (header day,clear_sky_index), instead of "
                            "--weather words")


def sky_given(args: argparse.Namespace) -> bool:
    """True when any sky option was given."""
    return any(getattr(args, k, None) is not None for k in SKY_OPTIONS)


def _number(text: str, option: str, lo: float, hi: float, example: str) -> float:
    try:
        value = float(str(text).strip())
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and lo <= value <= hi):
        raise RequestError(f"{option} {text!r}: give a number from {lo:g} to {hi:g}, "
                           f"such as {example}")
    return value


def read_site(args: argparse.Namespace, night_info: dict) -> Site:
    """The site and the panel's orientation from the options and the night's place."""
    lat = night_info["latitude_deg"]
    lon = night_info.get("longitude_deg")
    offset = night_info.get("utc_offset_h")
    lon = 0.0 if lon is None else lon
    if offset is None:
        offset = lon / 15.0 if night_info.get("longitude_deg") is not None else 0.0
    turbidity = DEFAULT_TURBIDITY if args.turbidity is None else _number(
        args.turbidity, "--turbidity", *TURBIDITY_RANGE, "3")
    tilt = None if args.tilt is None else _number(args.tilt, "--tilt", 0.0, 90.0, "35")
    azimuth = None if args.azimuth is None else _number(args.azimuth, "--azimuth", 0.0, 360.0,
                                                        "180")
    altitude = 0.0 if args.altitude is None else _number(args.altitude, "--altitude", -500.0,
                                                         9000.0, "120")
    return Site(lat, lon, offset, altitude, turbidity, tilt, azimuth)


@dataclass(frozen=True)
class SkyWeather:
    """The days' light from the sky: one profile per day, and what made it."""

    site: Site
    first_date: date
    profiles: tuple[Profile, ...]  # one per day, on the panel's plane
    indices: tuple[float, ...]  # clear-sky index per day
    irradiation_wh_m2: tuple[float, ...]  # per day, on the panel's plane (Wh/m²)
    low_sun: bool  # the sun stays under LOW_SUN_DEG on the first day
    highest_elevation_deg: float  # on the first day (degrees)
    sensitivity_wh_m2: dict[float, float]  # clear-sky plane total on day 1 at turbidity ±1

    def info(self) -> dict:
        """A JSON-ready description (units in the key names)."""
        s = self.site
        return {"model": "Ineichen-Perez clear sky, isotropic plane",
                "turbidity": s.turbidity, "tilt_deg": s.tilt, "azimuth_deg": s.azimuth,
                "albedo": s.albedo, "altitude_m": s.altitude_m,
                "highest_elevation_deg": self.highest_elevation_deg,
                "low_sun": self.low_sun,
                "turbidity_sensitivity_wh_m2": {f"{k:g}": v for k, v in
                                                self.sensitivity_wh_m2.items()}}

    def lines(self) -> list[str]:
        """Plain sentences for the report."""
        s = self.site
        out = [f"light: Ineichen-Perez clear sky at Linke turbidity {s.turbidity:g} (from "
               f"memory: 3 is a typical rural sky), on a panel tilted {s.tilt:g} degrees facing "
               f"azimuth {s.azimuth:g} (isotropic sky, ground albedo {s.albedo:g}, common "
               "practice), times a clear-sky index per day (clear 1, overcast 0.2, dim 0.01, "
               "common practice); shading and indoor light are not modelled"]
        return out

    def sensitivity_line(self) -> str | None:
        """When the sun stays low: the first day's light at turbidity ±1."""
        if not self.low_sun:
            return None
        if self.highest_elevation_deg <= 0.0:
            return (f"No sun: on {self.first_date.isoformat()} the sun stays below the horizon "
                    f"(at most {self.highest_elevation_deg:.1f} degrees); the clear-sky model "
                    "gives no light, and twilight alone does not charge the storage (estimate).")
        t = self.site.turbidity
        parts = [f"{v / 1e3:.2f} kWh/m² at turbidity {k:g}"
                 for k, v in sorted(self.sensitivity_wh_m2.items())]
        return (f"Low sun: the sun rises at most {self.highest_elevation_deg:.1f} degrees on "
                f"{self.first_date.isoformat()}, so the light hangs on the air's clarity: "
                + ", ".join(parts) + f" on a clear day (this run uses {t:g}).")


def read_indices(args: argparse.Namespace, n_days: int | None) -> tuple[tuple[str, ...],
                                                                        tuple[float, ...]]:
    """Weather names and clear-sky indices per day, from --sky-index or --weather words."""
    if args.sky_index is not None:
        if args.weather is not None or args.profile is not None:
            raise RequestError("give the weather one way: --weather words, --sky-index "
                               "FILE.csv or --profile FILE.csv")
        values = load_index_csv(args.sky_index)
        names = tuple(f"index {k:g}" for k in values)
    else:
        from pulsepick.analysis.irradiance import parse_weather

        words = parse_weather(args.weather or "clear")
        names = tuple(words)
        values = tuple(CLEAR_SKY_INDEX[w] for w in words)
    n = len(values) if n_days is None else n_days
    return (tuple(names[i % len(names)] for i in range(n)),
            tuple(values[i % len(values)] for i in range(n)))


def sky_weather(site: Site, first: date, names, indices) -> SkyWeather:
    """One profile per day from the clear sky of each date and its index."""
    profiles = []
    totals = []
    for i, (name, k) in enumerate(zip(names, indices, strict=True)):
        prof = day_profile(site, first + timedelta(days=i), k, name=name)
        profiles.append(prof)
        totals.append(prof.insolation_wh_m2)
    top = highest_elevation_deg(site, first)
    low = top < LOW_SUN_DEG
    sens: dict[float, float] = {}
    if low:
        lo, hi = TURBIDITY_RANGE
        for t in (site.turbidity - 1.0, site.turbidity, site.turbidity + 1.0):
            if lo <= t <= hi:
                sens[t] = daily_irradiation_wh_m2(site.with_turbidity(t), first)
    return SkyWeather(site, first, tuple(profiles), tuple(indices), tuple(totals), low, top,
                      sens)
