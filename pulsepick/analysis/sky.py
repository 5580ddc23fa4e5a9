"""Clear-sky sunlight on the panel, from the sun's position, the date and the place.

Global, beam and diffuse light on a horizontal surface follow the Ineichen-Perez clear-sky
model (ref:ineichen-perez-2002) with a Linke turbidity (default 3, a typical rural value,
from memory) and the site's altitude; the light on the panel's plane follows the
isotropic-sky model (ref:liu-jordan-1963):

    POA = DNI·cos(AOI) + DHI·(1 + cos β)/2 + GHI·ρ·(1 − cos β)/2

with β the panel's tilt, AOI the angle between the sun and the panel's normal, and ρ the
ground's albedo (0.2, common practice). The sun's position comes from
:func:`pulsepick.analysis.sun.solar_position`; the model takes the apparent zenith (with
atmospheric refraction), the Kasten-Young relative air mass scaled by the pressure at the
site's altitude, and the extraterrestrial normal irradiance on the day of the year.

The Haurwitz model (ref:haurwitz-1945), GHI = 1098·cos Z·exp(−0.057/cos Z) W/m², is kept
as an independent cross-check of the global horizontal light.

Weather is a clear-sky index per day: the day's light is the clear-sky light times the
index. Shading and indoor light are out of scope.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date as Date
from datetime import datetime, timedelta, timezone

import numpy as np

from pulsepick.analysis.irradiance import Profile
from pulsepick.analysis.sun import julian_day, solar_position
from pulsepick.errors import RequestError

DEFAULT_TURBIDITY = 3.0  # Linke turbidity of a typical rural sky (from memory)
DEFAULT_ALBEDO = 0.2  # ground reflectance (common practice)
TURBIDITY_RANGE = (1.0, 10.0)  # accepted Linke turbidities (clean polar air .. heavy haze)
# Clear-sky index of each weather word: the day's light as a fraction of the clear sky.
# Clear 1; overcast 0.2 (only diffuse light through thick cloud, common practice); dim 0.01
# (a panel under a porch or in deep shade that sees only a little sky, estimate).
CLEAR_SKY_INDEX = {"clear": 1.0, "overcast": 0.2, "dim": 0.01}
# The sun "stays low" when its highest elevation of the day is under this (degrees,
# estimate): then the result hangs on the turbidity and the report shows the spread.
LOW_SUN_DEG = 20.0
PROFILE_STEP_S = 300.0  # s, spacing of the day's profile (the day integrator's longest step)
SUM_STEP_S = 60.0  # s, spacing of the daily totals
DAY_S = 86400.0

# Ineichen-Perez coefficients (ref:ineichen-perez-2002, as in pvlib.clearsky.ineichen).
_SOLAR_CONSTANT_W_M2 = 1366.1  # W/m², for the extraterrestrial irradiance (from memory)
_HAURWITZ_A_W_M2 = 1098.0  # ref:haurwitz-1945
_HAURWITZ_B = 0.057  # ref:haurwitz-1945 (pvlib 0.16 writes 0.059: under 1 % apart above 15°)


@dataclass(frozen=True)
class Site:
    """Where the panel is and how it faces."""

    latitude_deg: float  # degrees, north positive
    longitude_deg: float = 0.0  # degrees, east positive
    utc_offset_h: float = 0.0  # h, the local clock's offset from UTC
    altitude_m: float = 0.0  # m above sea level
    turbidity: float = DEFAULT_TURBIDITY  # Linke turbidity (dimensionless)
    tilt_deg: float | None = None  # degrees from horizontal; None: the latitude's size
    azimuth_deg: float | None = None  # degrees from north, eastward; None: facing the equator
    albedo: float = DEFAULT_ALBEDO  # ground reflectance (0..1)

    def __post_init__(self) -> None:
        problems = []
        if not -90.0 <= self.latitude_deg <= 90.0:
            problems.append(f"latitude {self.latitude_deg:g} must lie within -90..90 degrees")
        if not -180.0 <= self.longitude_deg <= 180.0:
            problems.append(f"longitude {self.longitude_deg:g} must lie within -180..180 degrees")
        if not -14.0 <= self.utc_offset_h <= 14.0:
            problems.append(f"UTC offset {self.utc_offset_h:g} h must lie within -14..14 h")
        if not -500.0 <= self.altitude_m <= 9000.0:
            problems.append(f"altitude {self.altitude_m:g} m must lie within -500..9000 m")
        lo, hi = TURBIDITY_RANGE
        if not (math.isfinite(self.turbidity) and lo <= self.turbidity <= hi):
            problems.append(f"turbidity {self.turbidity:g} must lie within {lo:g}..{hi:g} "
                            "(Linke turbidity; 3 is a typical rural sky)")
        if self.tilt_deg is not None and not 0.0 <= self.tilt_deg <= 90.0:
            problems.append(f"tilt {self.tilt_deg:g} must lie within 0..90 degrees "
                            "(0 flat, 90 upright)")
        if self.azimuth_deg is not None and not 0.0 <= self.azimuth_deg <= 360.0:
            problems.append(f"azimuth {self.azimuth_deg:g} must lie within 0..360 degrees "
                            "(from north, eastward: 180 faces south)")
        if not 0.0 <= self.albedo <= 1.0:
            problems.append(f"albedo {self.albedo:g} must lie within 0..1")
        if problems:
            raise RequestError("; ".join(problems))

    @property
    def tilt(self) -> float:
        """The panel's tilt (degrees): given, or the latitude's size (common practice)."""
        return abs(self.latitude_deg) if self.tilt_deg is None else self.tilt_deg

    @property
    def azimuth(self) -> float:
        """The panel's azimuth (degrees from north): given, or facing the equator."""
        if self.azimuth_deg is not None:
            return self.azimuth_deg
        return 180.0 if self.latitude_deg >= 0 else 0.0

    def with_turbidity(self, turbidity: float) -> Site:
        """The same site under another Linke turbidity."""
        return Site(self.latitude_deg, self.longitude_deg, self.utc_offset_h, self.altitude_m,
                    turbidity, self.tilt_deg, self.azimuth_deg, self.albedo)


@dataclass(frozen=True, eq=False)
class SkyLight:
    """Clear-sky light at a set of instants (all arrays the same shape)."""

    zenith_deg: np.ndarray  # apparent zenith angle (degrees)
    azimuth_deg: np.ndarray  # sun's azimuth from north, eastward (degrees)
    ghi_w_m2: np.ndarray  # global horizontal irradiance (W/m²)
    dni_w_m2: np.ndarray  # direct normal irradiance (W/m²)
    dhi_w_m2: np.ndarray  # diffuse horizontal irradiance (W/m²)
    poa_w_m2: np.ndarray  # on the panel's plane (W/m²)


def refraction_deg(elevation_deg):
    """Atmospheric refraction (degrees) at a geometric elevation (degrees).

    The piecewise formula of NOAA GML's solar calculator (from memory): arc-seconds
    58.1/tan e − 0.07/tan³ e + 0.000086/tan⁵ e above 5°, a polynomial down to −0.575°, and
    −20.774/tan e below.
    """
    e = np.asarray(elevation_deg, dtype=float)
    t = np.tan(np.radians(np.clip(e, -89.0, 89.0)))
    with np.errstate(divide="ignore", invalid="ignore"):
        high = 58.1 / t - 0.07 / t ** 3 + 0.000086 / t ** 5
        mid = 1735.0 + e * (-518.2 + e * (103.4 + e * (-12.79 + e * 0.711)))
        low = -20.774 / t
    arcsec = np.where(e > 85.0, 0.0, np.where(e > 5.0, high, np.where(e > -0.575, mid, low)))
    return arcsec / 3600.0


def extra_radiation_w_m2(day_of_year):
    """Extraterrestrial normal irradiance (W/m²) on a day of the year (Spencer's series,
    as pvlib's default; from memory)."""
    b = 2.0 * np.pi * np.asarray(day_of_year, dtype=float) / 365.0
    r = (1.00011 + 0.034221 * np.cos(b) + 0.00128 * np.sin(b) + 0.000719 * np.cos(2 * b)
         + 0.000077 * np.sin(2 * b))
    return _SOLAR_CONSTANT_W_M2 * r


def relative_airmass(zenith_deg):
    """Kasten-Young relative optical air mass at an apparent zenith (degrees); nan below the
    horizon (from memory, as pvlib's kastenyoung1989)."""
    z = np.asarray(zenith_deg, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        am = 1.0 / (np.cos(np.radians(z)) + 0.50572 * (96.07995 - z) ** -1.6364)
    return np.where(z < 90.0, am, np.nan)


def pressure_pa(altitude_m: float) -> float:
    """Standard-atmosphere pressure (Pa) at an altitude (m) (from memory, as pvlib's
    alt2pres)."""
    return 100.0 * ((44331.514 - altitude_m) / 11880.516) ** (1.0 / 0.1902632)


def ineichen(zenith_deg, airmass_absolute, turbidity: float, altitude_m: float,
             dni_extra_w_m2):
    """Ineichen-Perez clear-sky GHI, DNI, DHI (W/m²) (ref:ineichen-perez-2002).

    Parameters
    ----------
    zenith_deg : apparent zenith angle (degrees).
    airmass_absolute : pressure-corrected air mass.
    turbidity : Linke turbidity.
    altitude_m : the site's altitude (m).
    dni_extra_w_m2 : extraterrestrial normal irradiance (W/m²).
    """
    cos_z = np.maximum(np.cos(np.radians(np.asarray(zenith_deg, dtype=float))), 0.0)
    am = np.nan_to_num(np.asarray(airmass_absolute, dtype=float), nan=0.0)
    tl = float(turbidity)
    fh1 = math.exp(-altitude_m / 8000.0)
    fh2 = math.exp(-altitude_m / 1250.0)
    cg1 = 5.09e-5 * altitude_m + 0.868
    cg2 = 3.92e-5 * altitude_m + 0.0387
    ghi = cg1 * dni_extra_w_m2 * cos_z * np.maximum(
        np.exp(-cg2 * am * (fh1 + fh2 * (tl - 1.0))), 0.0)
    b = 0.664 + 0.163 / fh1
    bnci = dni_extra_w_m2 * np.maximum(b * np.exp(-0.09 * am * (tl - 1.0)), 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = (1.0 - (0.1 - 0.2 * math.exp(-tl)) / (0.1 + 0.882 / fh1)) / cos_z
    bnci_2 = ghi * np.clip(np.nan_to_num(ratio, nan=0.0, posinf=1e20), 0.0, 1e20)
    dni = np.minimum(bnci, bnci_2)
    dhi = ghi - dni * cos_z
    up = (cos_z > 0) & (am > 0)
    return (np.where(up, ghi, 0.0), np.where(up, dni, 0.0), np.where(up, dhi, 0.0))


def haurwitz_ghi(zenith_deg):
    """Haurwitz clear-sky global horizontal irradiance (W/m²) at an apparent zenith
    (degrees) (ref:haurwitz-1945)."""
    cos_z = np.cos(np.radians(np.asarray(zenith_deg, dtype=float)))
    with np.errstate(divide="ignore", over="ignore"):
        g = _HAURWITZ_A_W_M2 * cos_z * np.exp(-_HAURWITZ_B / cos_z)
    return np.where(cos_z > 0, g, 0.0)


def plane_of_array(site: Site, ghi, dni, dhi, zenith_deg, azimuth_deg):
    """Light on the panel's plane (W/m²), isotropic sky (ref:liu-jordan-1963)."""
    beta = np.radians(site.tilt)
    z = np.radians(np.asarray(zenith_deg, dtype=float))
    cos_aoi = (np.cos(z) * np.cos(beta) + np.sin(z) * np.sin(beta)
               * np.cos(np.radians(np.asarray(azimuth_deg, dtype=float) - site.azimuth)))
    beam = np.maximum(dni * np.clip(cos_aoi, -1.0, 1.0), 0.0)
    sky = dhi * (1.0 + np.cos(beta)) / 2.0
    ground = ghi * site.albedo * (1.0 - np.cos(beta)) / 2.0
    return beam + sky + ground


def clear_sky(site: Site, when_utc: datetime, seconds) -> SkyLight:
    """Clear-sky light at ``when_utc`` plus each of ``seconds`` (s)."""
    s = np.asarray(seconds, dtype=float)
    jd = julian_day(when_utc) + s / DAY_S
    zen_geo, azimuth = solar_position(site.latitude_deg, site.longitude_deg, jd)
    zenith = zen_geo - refraction_deg(90.0 - zen_geo)
    start = when_utc.astimezone(timezone.utc) if when_utc.tzinfo else when_utc
    doy = start.timetuple().tm_yday + (start.hour * 3600 + start.minute * 60 + start.second
                                       + s) / DAY_S
    am = relative_airmass(zenith) * pressure_pa(site.altitude_m) / 101325.0
    ghi, dni, dhi = ineichen(zenith, am, site.turbidity, site.altitude_m,
                             extra_radiation_w_m2(np.floor(doy)))
    poa = plane_of_array(site, ghi, dni, dhi, zenith, azimuth)
    return SkyLight(zenith, azimuth, ghi, dni, dhi, poa)


def _local_midnight(site: Site, day: Date) -> datetime:
    return datetime(day.year, day.month, day.day,
                    tzinfo=timezone(timedelta(hours=site.utc_offset_h)))


def daily_irradiation_wh_m2(site: Site, day: Date, *, plane: bool = True,
                            step_s: float = SUM_STEP_S) -> float:
    """Clear-sky energy per square metre over the local day (Wh/m²), on the panel's plane
    (``plane=True``) or on a horizontal surface."""
    n = int(round(DAY_S / step_s))
    light = clear_sky(site, _local_midnight(site, day), np.arange(n) * step_s)
    g = light.poa_w_m2 if plane else light.ghi_w_m2
    return float(np.sum(g) * step_s / 3600.0)


def highest_elevation_deg(site: Site, day: Date) -> float:
    """The sun's highest apparent elevation over the local day (degrees)."""
    light = clear_sky(site, _local_midnight(site, day), np.arange(0.0, DAY_S, 300.0))
    return float(90.0 - np.min(light.zenith_deg))


def day_profile(site: Site, day: Date, index: float = 1.0, name: str = "clear",
                step_s: float = PROFILE_STEP_S) -> Profile:
    """The day's light on the panel as a :class:`Profile` on the local clock: the clear sky
    times the clear-sky index."""
    if not (math.isfinite(index) and 0.0 <= index <= 1.5):
        raise RequestError(f"clear-sky index {index!r} must lie within 0..1.5 "
                           "(1 is a clear day, 0.2 overcast)")
    n = int(round(DAY_S / step_s))
    t = np.arange(n + 1) * step_s
    light = clear_sky(site, _local_midnight(site, day), t)
    return Profile(name=name, hours=t / 3600.0, irradiance_w_m2=light.poa_w_m2 * index,
                   source=f"Ineichen-Perez clear sky, Linke turbidity {site.turbidity:g}, "
                          f"isotropic plane (ref:ineichen-perez-2002, ref:liu-jordan-1963), "
                          f"clear-sky index {index:g}")


def parse_index_text(text: str, name: str) -> tuple[float, ...]:
    """Daily clear-sky indices from CSV text: a header ``day,clear_sky_index`` (an optional
    ``source`` column is allowed), then one row per day, days 1, 2, 3, ... in order."""
    import csv
    import io

    accepted = "a header 'day,clear_sky_index' (optional 'source'), then one row per day 1, 2, ..."
    rows = [(i, line) for i, line in enumerate(text.splitlines(), start=1)
            if line.strip() and not line.strip().startswith("#")]
    if not rows:
        raise RequestError(f"clear-sky index file {name}: no header row; accepted: {accepted}")
    header_no, header = rows[0]
    columns = [c.strip().lower() for c in next(csv.reader(io.StringIO(header)))]
    if sorted(set(columns) - {"source"}) != ["clear_sky_index", "day"] or len(set(columns)) \
            != len(columns):
        raise RequestError(f"clear-sky index file {name} line {header_no}: columns "
                           f"{', '.join(columns)}; accepted: {accepted}")
    i_day, i_k = columns.index("day"), columns.index("clear_sky_index")
    out: list[float] = []
    for number, line in rows[1:]:
        fields = [f.strip() for f in next(csv.reader(io.StringIO(line)))]
        where = f"clear-sky index file {name} line {number}"
        if len(fields) != len(columns):
            raise RequestError(f"{where}: {len(fields)} fields where the header has "
                               f"{len(columns)}; accepted: {accepted}")
        try:
            day, k = int(fields[i_day]), float(fields[i_k])
        except ValueError:
            raise RequestError(f"{where}: {fields[i_day]!r}, {fields[i_k]!r}: accepted a whole "
                               "day number and an index such as 0.6") from None
        if day != len(out) + 1:
            raise RequestError(f"{where}: day {day} where day {len(out) + 1} comes next; "
                               f"accepted: {accepted}")
        if not (math.isfinite(k) and 0.0 <= k <= 1.5):
            raise RequestError(f"{where}: clear-sky index {fields[i_k]} is outside 0..1.5 "
                               "(1 is a clear day, 0.2 overcast)")
        out.append(k)
    if not out:
        raise RequestError(f"clear-sky index file {name}: no days; accepted: {accepted}")
    return tuple(out)


def load_index_csv(path) -> tuple[float, ...]:
    """Read a user's daily clear-sky indices (header ``day,clear_sky_index``)."""
    from pathlib import Path

    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as err:
        raise RequestError(f"clear-sky index file {str(p)!r} cannot be read "
                           f"({err.__class__.__name__}); accepted: a readable UTF-8 CSV file"
                           ) from err
    return parse_index_text(text, p.name)
