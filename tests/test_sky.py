"""Clear-sky light on the panel against pvlib (test-only reference) and the committed runs."""

from datetime import date, datetime, timezone

import numpy as np
import pandas as pd
import pytest
from pvlib import clearsky, irradiance, location

from pulsepick.analysis.sky import (
    CLEAR_SKY_INDEX,
    Site,
    clear_sky,
    daily_irradiation_wh_m2,
    day_profile,
    haurwitz_ghi,
    highest_elevation_deg,
)
from pulsepick.errors import RequestError

JUNE, DECEMBER = date(2026, 6, 21), date(2026, 12, 21)
# pvlib 0.16 reads DatetimeIndex.dayofyear inside its clear-sky code, which pandas deprecates;
# that one warning from the reference library is let through, every other stays an error.
pytestmark = pytest.mark.filterwarnings("ignore:DatetimeIndex.dayofyear is deprecated")


def _pvlib_day(lat: float, day: date, tilt: float, azimuth: float, turbidity: float = 3.0,
               step: str = "1min"):
    """pvlib's Ineichen clear sky and isotropic plane over a UTC day at longitude 0,
    altitude 0 (ref:ineichen-perez-2002, ref:liu-jordan-1963 as in pvlib)."""
    times = pd.date_range(day.isoformat(), periods=1440 if step == "1min" else 24,
                          freq=step, tz="UTC")
    site = location.Location(lat, 0.0, tz="UTC", altitude=0.0)
    sky = site.get_clearsky(times, model="ineichen", linke_turbidity=turbidity)
    sun = site.get_solarposition(times)
    poa = irradiance.get_total_irradiance(
        tilt, azimuth, sun["apparent_zenith"], sun["azimuth"], sky["dni"], sky["ghi"],
        sky["dhi"], albedo=0.2, model="isotropic")
    return times, sky, sun, poa["poa_global"]


@pytest.mark.parametrize("lat", [-33.9, 0.0, 35.0, 52.0, 60.0, 70.0])
@pytest.mark.parametrize("day", [JUNE, DECEMBER, date(2026, 3, 20)])
def test_hourly_light_matches_pvlib_ineichen_within_3_percent(lat, day):
    # pvlib.clearsky.ineichen through Location.get_clearsky at Linke turbidity 3: GHI, DNI
    # and DHI within 3 % wherever the sun is more than 5 degrees up.
    _, sky, sun, _ = _pvlib_day(lat, day, 0.0, 180.0, step="1h")
    ours = clear_sky(Site(lat), datetime(day.year, day.month, day.day, tzinfo=timezone.utc),
                     np.arange(24) * 3600.0)
    up = (90.0 - sun["apparent_zenith"].to_numpy()) > 5.0
    if lat == 70.0 and day == DECEMBER:
        assert not up.any()  # polar night: nothing to compare, and ours is dark too
        assert np.all(ours.ghi_w_m2 < 5.0)
        return
    assert up.sum() >= 3
    for ours_col, ref_col in ((ours.ghi_w_m2, "ghi"), (ours.dni_w_m2, "dni"),
                              (ours.dhi_w_m2, "dhi")):
        ref = sky[ref_col].to_numpy()[up]
        np.testing.assert_allclose(ours_col[up], ref, rtol=0.03, err_msg=ref_col)


@pytest.mark.parametrize("lat", [0.0, 35.0, 52.0, 60.0])
@pytest.mark.parametrize("day", [JUNE, DECEMBER])
def test_daily_plane_totals_match_pvlib_isotropic_within_5_percent(lat, day):
    # pvlib's Ineichen + get_total_irradiance(model="isotropic", albedo 0.2), 1-minute
    # steps; the plane faces south at the latitude's tilt (10 degrees at the equator).
    tilt = 10.0 if lat == 0.0 else lat
    _, _, _, poa = _pvlib_day(lat, day, tilt, 180.0)
    ref_wh = float(poa.sum()) / 60.0
    ours = daily_irradiation_wh_m2(Site(lat, tilt_deg=tilt, azimuth_deg=180.0), day)
    assert ref_wh > 100.0
    assert ours == pytest.approx(ref_wh, rel=0.05)


@pytest.mark.parametrize("lat, june_ghi, dec_ghi, june_poa, dec_poa", [
    # ref:pvlib-clearsky-runs, Linke turbidity 3, UTC, longitude 0 (kWh/m²)
    (0.0, 6.694, 7.157, 6.012, 7.706),
    (52.0, 8.253, 0.833, 7.255, 2.689),
    (60.0, 8.004, 0.168, 7.200, 0.863),
])
def test_daily_totals_match_the_committed_clear_sky_runs(lat, june_ghi, dec_ghi, june_poa,
                                                         dec_poa):
    # (35 N is left out: those runs took pvlib's looked-up ground altitude there.)
    tilt = 10.0 if lat == 0.0 else lat
    flat = Site(lat, tilt_deg=0.0)
    tilted = Site(lat, tilt_deg=tilt, azimuth_deg=180.0)
    assert daily_irradiation_wh_m2(flat, JUNE, plane=False) / 1e3 == pytest.approx(june_ghi,
                                                                                  rel=0.02)
    assert daily_irradiation_wh_m2(flat, DECEMBER, plane=False) / 1e3 == pytest.approx(
        dec_ghi, rel=0.02)
    assert daily_irradiation_wh_m2(tilted, JUNE) / 1e3 == pytest.approx(june_poa, rel=0.02)
    assert daily_irradiation_wh_m2(tilted, DECEMBER) / 1e3 == pytest.approx(dec_poa, rel=0.02)


@pytest.mark.parametrize("turbidity, ratio", [(2.0, 0.265), (3.0, 0.120), (4.0, 0.059),
                                              (5.0, 0.032)])
def test_high_latitude_winter_hangs_on_the_turbidity(turbidity, ratio):
    # ref:pvlib-clearsky-runs: December/June ratio at 60 N on a plane tilted 60 degrees south.
    site = Site(60.0, tilt_deg=60.0, azimuth_deg=180.0, turbidity=turbidity)
    ours = daily_irradiation_wh_m2(site, DECEMBER) / daily_irradiation_wh_m2(site, JUNE)
    assert ours == pytest.approx(ratio, rel=0.03)


@pytest.mark.parametrize("lat, day, turbidity", [
    (0.0, JUNE, 3.0), (0.0, DECEMBER, 3.0), (35.0, JUNE, 3.0), (35.0, DECEMBER, 3.0),
    (52.0, JUNE, 3.0), (52.0, DECEMBER, 3.0), (60.0, JUNE, 3.0),
    # Haurwitz has no turbidity: at 60 N in December it sits 31 % above Ineichen at
    # turbidity 3 and with Ineichen at the clean-air turbidity 2 (measured here: 1 % apart)
    (60.0, DECEMBER, 2.0),
])
def test_global_horizontal_within_25_percent_of_haurwitz(lat, day, turbidity):
    # pvlib.clearsky.haurwitz (ref:haurwitz-1945), an independent clear-sky model: daily
    # global horizontal within 25 % (the two published models differ by up to 20 % in
    # winter at high latitude).
    _, _, sun, _ = _pvlib_day(lat, day, 0.0, 180.0)
    ref = float(clearsky.haurwitz(sun["apparent_zenith"])["ghi"].sum()) / 60.0
    ours = daily_irradiation_wh_m2(Site(lat, turbidity=turbidity), day, plane=False)
    assert ours == pytest.approx(ref, rel=0.25)
    # our Haurwitz formula: 1098·cos Z·exp(-0.057/cos Z) (ref:haurwitz-1945); pvlib 0.16 writes
    # 0.059 in the exponent, which differs by exp(0.002/cos Z): under 1 % above 15 degrees up.
    zen = sun["apparent_zenith"].to_numpy()
    high = zen < 75.0
    np.testing.assert_allclose(haurwitz_ghi(zen)[high], clearsky.haurwitz(
        sun["apparent_zenith"])["ghi"].to_numpy()[high], rtol=0.01)


def test_haurwitz_by_hand():
    # cos Z = 0.5: 1098 × 0.5 × exp(-0.114) = 489.85 W/m² (hand, ref:haurwitz-1945)
    assert float(haurwitz_ghi(60.0)) == pytest.approx(489.85, abs=0.05)
    assert float(haurwitz_ghi(95.0)) == 0.0


def test_default_panel_faces_the_equator_at_the_latitude_tilt():
    # common practice: facing the equator, tilted by the latitude
    north, south = Site(52.0), Site(-35.0)
    assert (north.tilt, north.azimuth) == (52.0, 180.0)
    assert (south.tilt, south.azimuth) == (35.0, 0.0)


def test_day_profile_is_the_clear_sky_times_the_index():
    site = Site(52.0)
    clear = day_profile(site, DECEMBER)
    over = day_profile(site, DECEMBER, CLEAR_SKY_INDEX["overcast"], name="overcast")
    assert clear.insolation_wh_m2 > 2000.0  # 2.69 kWh/m² at 52 N (ref:pvlib-clearsky-runs)
    assert over.insolation_wh_m2 == pytest.approx(0.2 * clear.insolation_wh_m2, rel=1e-9)
    # the 5-minute profile's trapezoid total is the 1-minute sum within 1 %
    assert clear.insolation_wh_m2 == pytest.approx(daily_irradiation_wh_m2(site, DECEMBER),
                                                   rel=0.01)


def test_low_sun_in_winter():
    # 60 N on 21 December: the sun culminates at 90 - 60 - 23.44 = 6.6 degrees (hand, plus
    # about 0.1 degree of refraction).
    assert highest_elevation_deg(Site(60.0), DECEMBER) == pytest.approx(6.65, abs=0.2)


@pytest.mark.parametrize("kwargs, words", [
    ({"turbidity": 0.5}, "turbidity"), ({"tilt_deg": 120.0}, "tilt"),
    ({"azimuth_deg": -5.0}, "azimuth"), ({"albedo": 2.0}, "albedo"),
])
def test_bad_sites_are_refused(kwargs, words):
    with pytest.raises(RequestError, match=words):
        Site(52.0, **kwargs)
