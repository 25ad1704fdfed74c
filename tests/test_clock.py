"""Tests of fluxpart.clock: the clock and site-geometry check (issue 12).

Known-truth records come from tests/clock_sites.py: the sun and the clear-sky Rg from
pvlib (0.16.1 when written; ``pvlib.solarposition.get_solarposition``, NREL SPA, and
``pvlib.clearsky.haurwitz``), independent of fluxpart.solar, with invented clouds and a
known clock error. A check that agreed with itself only would pass on its own mistakes;
here the truth is set by the reference library.
"""

import re

import numpy as np
import pandas as pd
import pytest
from clock_sites import synthetic_rg

from fluxpart.clock import (
    ClockVerdict,
    check_clock,
    check_hemisphere,
    check_latitude,
    monthly_shifts,
    shift_threshold_minutes,
)


def _check(rg, latitude, longitude, utc_offset, interval, **kwargs):
    return check_clock(rg.index, rg.to_numpy(), latitude, longitude, utc_offset, interval,
                       **kwargs)


# Correct sites from 78° S to 78° N, both record lengths, clear to cloudy, a tilted
# and a partly shaded sensor: the check must not call any of them a clock problem.
CORRECT = [
    # (latitude, longitude, utc_offset, interval, cloudiness, extra)
    (-78.0, 166.7, 12.0, 30, "moderate", {}),          # polar night and midnight sun
    (-35.3, 149.1, 10.0, 60, "cloudy", {}),
    (5.0, -52.0, -3.0, 30, "cloudy", {"afternoon_showers": 0.4}),
    (49.3, 10.2, 1.0, 30, "moderate", {"tilt_degrees": 3.0, "tilt_azimuth": 270.0}),
    (62.0, 25.0, 2.0, 60, "cloudy", {"shade_azimuths": (60.0, 120.0)}),
    (78.0, 15.6, 1.0, 60, "cloudy", {}),               # polar night and midnight sun
]


@pytest.mark.parametrize("latitude, longitude, utc_offset, interval, cloudiness, extra", CORRECT)
def test_correct_sites_raise_nothing(latitude, longitude, utc_offset, interval, cloudiness,
                                     extra):
    """No clock or hemisphere problem on correct sites; the estimate is near zero."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                      cloudiness=cloudiness, seed=int(abs(latitude)), **extra)
    verdict = _check(rg, latitude, longitude, utc_offset, interval)
    assert verdict.problems == ()
    assert verdict.status in ("consistent", "cannot_judge")
    assert verdict.hemisphere != "mismatch"
    # the sun of pvlib's SPA and fluxpart.solar agree within 0.05 deg (test_solar), so a
    # correct site's median shift is a few minutes; a tilt or shade moves the apparent
    # noon further (up to about half the threshold here), which must stay below it
    assert abs(verdict.shift_minutes) < shift_threshold_minutes(interval)
    if not extra:
        assert abs(verdict.shift_minutes) < 8.0


# A clock or stamp error of one record or more: caught, measured within 8 min (a quarter
# of a half-hour record: the refinement is to a sixth of a record, plus cloud noise).
SHIFTED = [
    (-35.3, 149.1, 10.0, 30, 30.0),
    (50.0, 8.0, 1.0, 30, -30.0),
    (65.0, 25.0, 2.0, 60, 60.0),
    (-78.0, 166.7, 12.0, 60, -60.0),
    (20.0, -100.0, -6.0, 30, 120.0),
]


@pytest.mark.parametrize("latitude, longitude, utc_offset, interval, shift", SHIFTED)
def test_shift_of_one_record_or_more_is_caught(latitude, longitude, utc_offset, interval, shift):
    """A logger clock off by one record or more is a problem naming the fix."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                      cloudiness="moderate", clock_shift_minutes=shift, seed=7)
    verdict = _check(rg, latitude, longitude, utc_offset, interval)
    assert verdict.status == "shifted"
    assert abs(verdict.shift_minutes - shift) < 8.0
    assert len(verdict.problems) == 1 and "clock:" in verdict.problems[0]
    if shift % 60 == 0:
        # stamps `shift` minutes late are in a zone shift/60 h east of the configured one
        assert verdict.suggested_utc_offset == utc_offset + shift / 60
        assert f"utc_offset = {utc_offset + shift / 60:g}" in verdict.problems[0]


def test_file_in_local_time_declared_utc_names_the_offset():
    """Issue 12's first case: stamps in UTC+10 read as UTC: 600 min, utc_offset = 10."""
    rg = synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, seed=2)
    verdict = _check(rg, -35.3, 149.1, 0.0, 30)
    assert verdict.status == "shifted"
    assert abs(verdict.shift_minutes - 600.0) < 8.0
    assert verdict.suggested_utc_offset == 10.0


def test_logger_kept_on_utc_names_the_time_zone_setting_too():
    """Stamps in UTC at a UTC+10 site: besides utc_offset = 0 (which would move the output
    to UTC), the fix that keeps the output in the site's standard time, [input] time_zone =
    "UTC", is named (review, round five). The sun is timed by Michalsky (1988) as above."""
    rg = synthetic_rg(-35.3, 149.1, 0.0, interval_minutes=30, seed=2)
    verdict = _check(rg, -35.3, 149.1, 10.0, 30)
    assert verdict.status == "shifted" and verdict.suggested_utc_offset == 0.0
    assert ('[site] utc_offset = 0 (stamps in UTC+0 h rather than UTC+10 h) or [input] '
            'time_zone = "UTC" (a logger kept on UTC; the output stays in the site\'s '
            'UTC+10 h') in verdict.problems[0]        # review36: a frame's hint may follow
    other = _check(synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, seed=2),
                   -35.3, 149.1, 0.0, 30)
    assert "time_zone" not in other.problems[0]


def test_a_zone_the_stamps_are_not_in_is_named_not_a_utc_offset_that_cannot_mend_it():
    """Stamps in the site's standard time UTC+10 read with [input] time_zone = "UTC": the
    reader adds 10 h, Rg comes 600 min late. With a zone the conversion puts the stamps in
    whatever utc_offset says, so another utc_offset cannot move Rg against the sun (the
    arithmetic of UTC offsets, common practice); the zone is named (round mistakes48:
    "utc_offset = 20" was offered). Sun and clear sky from pvlib as above."""
    rg = synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, seed=2,
                      clock_shift_minutes=600.0)
    verdict = _check(rg, -35.3, 149.1, 10.0, 30, time_zone="UTC")
    assert verdict.status == "shifted" and verdict.suggested_utc_offset is None
    assert "remove [input] time_zone (the stamps are in the site's standard time UTC+10 h, "\
        "not UTC+0 h" in verdict.problems[0]
    assert "utc_offset = " not in verdict.problems[0].split("likely fix:")[1]
    # stamps in UTC read as the site's zone: the zone "UTC" named
    early = _check(synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, seed=2,
                                clock_shift_minutes=-600.0), -35.3, 149.1, 10.0, 30,
                   time_zone="Australia/Sydney")
    assert '[input] time_zone = "UTC" (the stamps are in UTC, not UTC+10 h' in early.problems[0]


def test_utc_offset_of_the_wrong_sign_near_twelve_hours_is_one_shift():
    """A site at 94.8° W in UTC-6 declared UTC+6: the stamps are 12 h off, so month by
    month the shift reads about +715 or -720 min (a day wraps at ±12 h). Unwrapped around
    its circular mean it is one shift, and the fix named is utc_offset = -6; before, the
    months on either side of the wrap were called a clock off in part of the record
    (review, 0.12.0)."""
    rg = synthetic_rg(38.0, -94.8, -6.0, interval_minutes=30, seed=7)
    verdict = _check(rg, 38.0, -94.8, 6.0, 30)
    assert verdict.status == "shifted"
    assert abs(abs(verdict.shift_minutes) - 720.0) < 10.0
    assert verdict.suggested_utc_offset == -6.0
    assert "utc_offset = -6" in verdict.problems[0]


def test_mistyped_longitude_is_named_not_an_offset_no_zone_uses():
    """A tower at 10.2° E configured at 20.2° E: the sun is expected 40 min early (4 min
    per degree), so Rg comes 40 min late. No time zone is UTC+1:45, so the fix named is
    the longitude, not utc_offset = 1.75 as before (review, 0.12.0)."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, seed=8)
    verdict = _check(rg, 49.3, 20.2, 1.0, 30)
    assert verdict.status == "shifted"
    assert abs(verdict.shift_minutes - 40.0) < 8.0
    assert verdict.suggested_utc_offset is None
    assert "[site] longitude" in verdict.problems[0]
    assert "utc_offset = 1.75" not in verdict.problems[0]


def test_end_stamps_read_as_start_name_time_marks():
    """Stamps that mark interval ends read as starts: one record late; time_marks is named."""
    # the reader's convention (fluxpart.io): "end" stamps are shifted back one interval
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, clock_shift_minutes=30.0, seed=4)
    verdict = _check(rg, 49.3, 10.2, 1.0, 30, time_marks="start", shift_applied_minutes=0.0)
    assert verdict.status == "shifted"
    assert 'time_marks = "end"' in verdict.problems[0]


def test_longitude_of_the_wrong_sign_is_named():
    """The sun crosses the meridian 4 min later per degree west (360° in 24 h): a site at
    10.2° E configured at 10.2° W expects noon 81.6 min late, so Rg comes 81.6 min early;
    the message names the longitude."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, seed=5)
    verdict = _check(rg, 49.3, -10.2, 1.0, 30)
    assert verdict.status == "shifted"
    assert abs(verdict.shift_minutes + 8 * 10.2) < 8.0
    assert "[site] longitude = 10.2" in verdict.problems[0]


def test_latitude_and_longitude_swapped_are_named():
    """A site at 49.3° N, 10.2° E configured as latitude 10.2, longitude 49.3: the sun is
    timed 39.1° too far east, 4 min per degree (360° in 24 h), so Rg comes 156 min late;
    the first fix named is the swap (it named utc_offset = 3.5 only). A plain offset error
    at the same site does not name a swap."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, seed=6)
    verdict = _check(rg, 10.2, 49.3, 1.0, 30)
    assert verdict.status == "shifted"
    assert abs(verdict.shift_minutes - 4 * (49.3 - 10.2)) < 8.0
    assert "likely fix: [site] latitude = 49.3 and longitude = 10.2" in verdict.problems[0]
    offset = _check(rg, 49.3, 10.2, 0.0, 30)
    assert offset.status == "shifted" and "swapped" not in offset.problems[0]


def test_placeholder_coordinates_are_named_first():
    """[site] latitude = 0, longitude = 0 left in a config for a site at 10.2° E: Rg comes
    41 min early (4 min per degree); the fix names the coordinates before a utc_offset of
    0.25 h, which alone would have made the clock look right."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, seed=7)
    verdict = _check(rg, 0.0, 0.0, 1.0, 30)
    assert verdict.status == "shifted"
    assert "likely fix: [site] latitude and longitude (0, 0 is a placeholder" in \
        verdict.problems[0]


@pytest.mark.parametrize("latitude, longitude, utc_offset, months, interval", [
    (50.0, 8.0, 1.0, (4, 11), 30),       # northern daylight saving, April to October
    (-35.3, 149.1, 10.0, (10, 4), 60),   # southern, October to March
])
def test_daylight_saving_stamps_are_named(latitude, longitude, utc_offset, months, interval):
    """Civil time with daylight saving (one hour ahead in summer, a fact of civil time):
    named as such, with [input] time_zone, and the standard-time shift near zero."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                      daylight_saving=months, seed=6)
    verdict = _check(rg, latitude, longitude, utc_offset, interval)
    assert verdict.status == "daylight_saving"
    assert "time_zone" in verdict.problems[0] and "daylight-saving" in verdict.problems[0]
    assert abs(verdict.shift_minutes) < 8.0


@pytest.mark.parametrize("latitude, utc_offset, longitude", [(35.3, 10.0, 149.1),
                                                             (-20.0, -4.0, -60.0),
                                                             (78.0, 1.0, 15.6)])
def test_latitude_of_the_wrong_sign_is_caught(latitude, utc_offset, longitude):
    """Daily extraterrestrial radiation peaks in the local summer (FAO-56 eq. 21): Rg of
    the other hemisphere than the configured latitude's is a geometry problem."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=30, seed=8)
    verdict = _check(rg, -latitude, longitude, utc_offset, 30)
    assert verdict.hemisphere == "mismatch"
    assert any(f"latitude = {latitude:g}" in p for p in verdict.problems)


def test_polar_night_months_are_not_judged_but_named():
    """At 78° N the sun stays below the horizon from about November to mid-February
    (day length, FAO-56 eq. 34); those months are named and left out, the rest judged."""
    rg = synthetic_rg(78.0, 15.6, 1.0, interval_minutes=30, seed=9)
    months = monthly_shifts(rg.index, rg.to_numpy(), 78.0, 15.6, 1.0, 30)
    assert months.loc["2021-12-01", "reason"].startswith("no daylight")
    assert not months.loc["2021-12-01", "used"]
    assert months.loc["2021-06-01", "used"]           # midnight sun: judged all the same
    assert months["used"].sum() >= 6


def test_too_short_a_record_cannot_be_judged():
    """Five days: the check says it cannot judge, and why; no problem is invented."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, days=5, seed=10,
                      clock_shift_minutes=60.0)
    verdict = _check(rg, 49.3, 10.2, 1.0, 30)
    assert verdict.status == "cannot_judge" and verdict.problems == ()
    assert np.isnan(verdict.shift_minutes)
    assert any("clock not judged" in note for note in verdict.notes)
    assert verdict.to_dict()["shift_minutes"] is None


def test_rg_without_daylight_cannot_be_judged():
    """Rg = 0 all year: no diurnal cycle, nothing to judge; the months say so."""
    index = pd.date_range("2021-01-01", periods=17520, freq="30min")
    verdict = check_clock(index, np.zeros(len(index)), 78.0, 15.6, 1.0, 30)
    assert verdict.status == "cannot_judge"
    assert verdict.months["reason"].str.contains("no diurnal cycle").any()
    assert check_hemisphere(index, np.zeros(len(index)), 78.0, 15.6, 1.0, 30)[0] == \
        "cannot_judge"


def test_threshold_is_below_one_record():
    """One record (30 or 60 min) is always above the threshold, with margin."""
    assert shift_threshold_minutes(30) == 20.0
    assert shift_threshold_minutes(60) == 40.0


def test_verdict_is_json_ready_and_input_untouched():
    """to_dict gives plain values (for the manifest); the Rg array is not modified."""
    rg = synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=60, days=90, seed=11)
    values = rg.to_numpy().copy()
    verdict = _check(rg, -35.3, 149.1, 10.0, 60)
    assert isinstance(verdict, ClockVerdict)
    np.testing.assert_array_equal(rg.to_numpy(), values)
    record = verdict.to_dict()
    assert set(record) >= {"status", "shift_minutes", "spread_minutes", "months_used",
                           "hemisphere", "problems", "notes"}
    assert isinstance(record["shift_minutes"], float)


def test_clock_off_for_part_of_the_record_is_named():
    """A logger clock reset one hour late for the last ten months of two years: the period
    is named (the shift of Rg against pvlib's sun is the known truth)."""
    on_time = synthetic_rg(45.0, 10.0, 1.0, interval_minutes=30, days=730, seed=1)
    late = synthetic_rg(45.0, 10.0, 1.0, interval_minutes=30, days=730, seed=1,
                        clock_shift_minutes=60.0)
    rg = on_time.where(on_time.index < "2022-03-01", late)
    verdict = _check(rg, 45.0, 10.0, 1.0, 30)
    assert verdict.status == "shifted"
    assert "from 2022-03 to 2022-12" in verdict.problems[0]



def test_a_run_shifted_as_much_as_the_rest_is_no_period_on_another_clock():
    """Known truth (the invented demo year, clock on time): the direct beam blocked every
    afternoon from 14:30 to 17:30 (Rg x 0.3, a tree west of the sensor) moves each month's
    Rg peak some 45 min early, and in the winter months, whose sunset falls in the shade,
    the rise and fall too. The run of those months was named "from 2021-01 to 2021-04
    measured Rg comes 43 min earlier than the sun ..., against -44 min in the rest of the
    record: the logger clock was off in that period", a period no different from the
    rest, and `run` refused the record (review25). A clock set otherwise for a period
    moves it against the rest by its step (Iqbal 1983, ch. 1 (m): zones differ by whole
    or half hours), so a run is named only where it differs from the other months by the
    threshold; the shade is left to the note and the shading check. A period truly an
    hour off (the last ten months of two years) is still named
    (test_clock_off_for_part_of_the_record_is_named)."""
    from fluxpart import demo

    frame, _ = demo.site_year(seed=1)
    site = demo.site()
    rg = frame["rg"]
    hour = rg.index.hour + rg.index.minute / 60
    shaded = rg.where(~((hour >= 14.5) & (hour < 17.5)), rg * 0.3)
    verdict = _check(shaded, site.latitude, site.longitude, site.utc_offset, 30)
    assert verdict.status == "consistent", verdict.problems
    assert not any("in that period" in problem for problem in verdict.problems)
    assert any("partly shaded" in note for note in verdict.notes)
    # the unshaded year is on time
    assert _check(rg, site.latitude, site.longitude, site.utc_offset, 30).problems == ()


@pytest.mark.parametrize("minutes", [10, 20, 30, 60])
def test_lagged_potential_equals_the_direct_computation(minutes):
    """The lags reused from one record later (and a whole record's lag from one record
    earlier) equal potential radiation computed at the
    moved stamps, to the last bit; a record with gaps is computed directly. So do they
    where the record's own potential radiation is given (the run's solar geometry), which
    then only gains a record at each end."""
    from fluxpart.clock import _lagged_potential
    from fluxpart.solar import potential_radiation

    regular = pd.date_range("2021-03-01", periods=2000, freq=f"{minutes}min")
    lags = np.arange(-6, 7) * (minutes / 6.0)
    cases = [(index, given) for index in (regular, regular.delete([5, 6, 100]))
             for given in (None, potential_radiation(index, -33.9, 18.4, 2.0, float(minutes)))]
    for index, given in cases:
        got = _lagged_potential(index, (-33.9, 18.4, 2.0), float(minutes), lags, given)
        for lag in lags:
            expected = potential_radiation(index - pd.Timedelta(minutes=float(lag)), -33.9,
                                           18.4, 2.0, float(minutes))
            np.testing.assert_array_equal(got[float(lag)], expected)


@pytest.mark.parametrize("missing", [(), (3, 17)])
def test_lag_correlations_in_one_pass_equal_one_lag_at_a_time(missing):
    """The month's correlations over all lags at once equal, to the last bit, one call per
    ``numpy.roll`` lag, and agree with ``numpy.corrcoef`` (NumPy 2.x) where every slot has
    data; slots without Rg (NaN) take the per-lag masks."""
    from fluxpart.clock import _correlation, _correlations, _rolled

    slots = 48
    hours = (np.arange(slots) + 0.5) / 2.0
    model = np.clip(900.0 * np.cos((hours - 12.3) * np.pi / 12.0), 0.0, None)
    envelope = np.clip(700.0 * np.cos((hours - 12.9) * np.pi / 12.0), 0.0, None) \
        + np.random.default_rng(3).normal(0.0, 20.0, slots)
    envelope[list(missing)] = np.nan
    rolled = _rolled(model, range(slots))
    for k in range(slots):
        np.testing.assert_array_equal(rolled[k], np.roll(model, k))
    got = _correlations(envelope, rolled)
    expected = np.array([_correlation(envelope, np.roll(model, k)) for k in range(slots)])
    np.testing.assert_array_equal(got, expected)
    ok = np.isfinite(envelope)
    reference = [np.corrcoef(envelope[ok], np.roll(model, k)[ok])[0, 1] for k in range(slots)]
    np.testing.assert_allclose(got, reference, rtol=0, atol=1e-12)


@pytest.mark.parametrize("true_latitude, configured, longitude, utc_offset", [
    (49.3, 30.0, 10.2, 1.0),       # a site TOML pointing at a file from 19° further north
    (49.3, 65.0, 10.2, 1.0),       # ... or 16° further south (the run filled no year fully)
    (-35.3, -20.0, 149.1, 10.0),   # southern hemisphere, same sign
    (20.0, 45.0, -100.0, -6.0),
])
def test_latitude_far_off_the_file_is_named(true_latitude, configured, longitude, utc_offset):
    """Day length against latitude and season (FAO-56 eq. 34): Rg of a site at one latitude
    read with a latitude 15° or more away (another site's file, a typo) has day lengths that
    swing against the configured sun through the year; the check names the latitude the
    day lengths fit, within 3° (the scan's 1° step plus cloud and diffuse-light noise). It
    passed before with at most a generic warning (review, round six)."""
    rg = synthetic_rg(true_latitude, longitude, utc_offset, interval_minutes=30,
                      cloudiness="cloudy", seed=3)
    verdict = _check(rg, configured, longitude, utc_offset, 30)
    assert verdict.status == "latitude"
    problem = next(p for p in verdict.problems if "day lengths of Rg fit latitude" in p)
    named = float(problem.split("fit latitude ")[1].split(" ")[0])
    assert abs(named - true_latitude) <= 3.0
    assert "[site] latitude" in problem and "[input] path" in problem


@pytest.mark.parametrize("true_latitude, configured", [
    (-49.3, 0.0),       # a template's latitude left at 0 for a site at 49° S
    (49.3, -2.0),       # a mistyped value of the other sign near the equator
])
def test_a_site_of_the_other_hemisphere_configured_near_the_equator_is_named(true_latitude,
                                                                           configured):
    """Near the equator the hemisphere is not judged (its seasons differ too little), and
    a scan of the configured sign alone found its best at the equator, within 10° of the
    configured value: the site was called consistent, its day lengths swinging 135 min
    against the sun's (review60). Day length against latitude and season (FAO-56 eq. 34):
    the other hemisphere's scan names the true latitude, within 3° (the scan's 1° step
    plus cloud noise), and the sign."""
    rg = synthetic_rg(true_latitude, 10.2, 1.0, interval_minutes=30, seed=2)
    verdict = _check(rg, configured, 10.2, 1.0, 30)
    assert verdict.status == "latitude"
    problem = next(p for p in verdict.problems if "day lengths of Rg fit latitude" in p)
    named = float(problem.split("fit latitude ")[1].split(" ")[0])
    assert abs(named - true_latitude) <= 3.0
    assert "check [site] latitude and its sign" in problem


@pytest.mark.parametrize("latitude, longitude, utc_offset, interval, cloudiness, extra", CORRECT)
def test_latitude_check_passes_correct_sites(latitude, longitude, utc_offset, interval,
                                             cloudiness, extra):
    """The correct sites of CORRECT (polar, tilted, shaded, cloudy, near the equator) give no
    latitude mismatch, and a latitude 5° off (below MIN_LATITUDE_ERROR) is not called one."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                      cloudiness=cloudiness, seed=int(abs(latitude)), **extra)
    for configured in (latitude, latitude - 5.0 if latitude > 0 else latitude + 5.0):
        verdict = check_latitude(rg.index, rg.to_numpy(), configured, longitude, utc_offset,
                                 interval)
        assert verdict[0] != "mismatch", verdict[1]


def test_latitude_verdict_without_scan_where_the_swing_decides():
    """`verdict_only` (what check_clock asks) skips the latitude scan where the configured
    latitude's day-length swing is at most MIN_DAYLENGTH_SWING, which decides "consistent"
    before any latitude is scanned: the same verdict and detail as the full scan, `best`
    NaN; a latitude 19° off still scans and is called a mismatch (FAO-56 eq. 34: day
    length against latitude and season)."""
    rg = synthetic_rg(48.0, 11.0, 1.0, interval_minutes=30, seed=3)
    months = monthly_shifts(rg.index, rg.to_numpy(), 48.0, 11.0, 1.0, 30)
    full = check_latitude(rg.index, rg.to_numpy(), 48.0, 11.0, 1.0, 30, months)
    quick = check_latitude(rg.index, rg.to_numpy(), 48.0, 11.0, 1.0, 30, months,
                           verdict_only=True)
    assert full[0] == quick[0] == "consistent" and full[1] == quick[1]
    assert np.isfinite(full[2]) and np.isnan(quick[2])
    wrong = check_latitude(rg.index, rg.to_numpy(), 29.0, 11.0, 1.0, 30, verdict_only=True)
    assert wrong[0] == "mismatch" and abs(wrong[2] - 48.0) <= 3.0


@pytest.mark.parametrize("latitude, longitude, utc_offset, interval", [
    (37.4, -122.4, -8.0, 30),      # summer marine fog on a northern coast
    (-23.0, 14.5, 1.0, 60),        # the same in a southern summer, hourly
])
def test_summer_morning_fog_is_not_daylight_saving(latitude, longitude, utc_offset, interval):
    """Fog on 95 % of summer mornings, clearing between 9 and 12 h, moves the Rg envelope's
    peak about an hour later in those months only, as daylight-saving stamps would; but a
    clock moves sunrise and sunset alike and keeps the day length, while a morning cut
    shortens it by about twice the shift (day length about solar noon: FAO-56 eq. 34).
    Stamps were refused as daylight saving before (review, round ten); the same record with
    true daylight-saving stamps is still refused."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                      cloudiness="moderate", summer_morning_fog=0.95, seed=4)
    verdict = _check(rg, latitude, longitude, utc_offset, interval)
    assert verdict.status == "consistent", verdict.problems
    assert not verdict.problems
    months = (4, 11) if latitude > 0 else (10, 4)
    saving = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval,
                          cloudiness="moderate", summer_morning_fog=0.95, seed=4,
                          daylight_saving=months)
    # still refused: named as daylight saving, or (where the fog adds to the saving hour in
    # the same months) as a clock off in those months
    wrong = _check(saving, latitude, longitude, utc_offset, interval)
    assert wrong.status in ("daylight_saving", "shifted") and wrong.problems


@pytest.mark.parametrize("elevation", [30.0, 40.0])
def test_sensor_shaded_in_summer_mornings_is_not_a_wrong_latitude(elevation):
    """A tree line or building north-east to east of the sensor (azimuth 40-110°, up to 30-40°
    above the horizon) blocks the direct beam on summer mornings only (the sun rises north
    of east in summer): the Rg envelope's width then swings through the year as a wrong
    latitude's would, but only its rise moves. A latitude moves sunrise and sunset
    symmetrically about solar noon (FAO-56 eq. 34), so the midpoint of the edges stays
    put. Refused as latitude 29-36° before (review, round ten); named as a note now."""
    rg = synthetic_rg(48.0, 11.0, 1.0, cloudiness="moderate", shade_azimuths=(40.0, 110.0),
                      shade_elevation=elevation, seed=3)
    verdict = _check(rg, 48.0, 11.0, 1.0, 30)
    assert verdict.status == "consistent", verdict.problems
    assert any("rise and fall move unequally" in note for note in verdict.notes)
    # the same sensor at a latitude 19° off is still called wrong where nothing shades it
    clear = synthetic_rg(48.0, 11.0, 1.0, cloudiness="moderate", seed=3)
    assert _check(clear, 29.0, 11.0, 1.0, 30).status == "latitude"


@pytest.mark.parametrize("latitude, longitude, utc_offset, interval, month, shift", [
    (45.0, 10.0, 1.0, 30, 7, 60.0),       # one monthly file in civil summer time
    (-35.3, 149.1, 10.0, 60, 1, -60.0),   # a southern January file an hour early, hourly
    (65.0, 25.0, 2.0, 30, 4, 120.0),      # an April file left on another zone's clock
])
def test_clock_off_for_one_month_only_is_named(latitude, longitude, utc_offset, interval, month,
                                               shift):
    """One month's stamps off by a clock step (a logger reset to another time for one
    monthly file): the month is named. The shift of Rg against pvlib's sun (NREL SPA) is
    the known truth; before, only runs of three months or more were named and such a
    month passed the check (the example with July an hour late: daytime GPP -6.4 g C m-2,
    named only by Rg above the potential radiation)."""
    on_time = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval, seed=3)
    off = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=interval, seed=3,
                       clock_shift_minutes=shift)
    rg = on_time.where(on_time.index.month != month, off)
    verdict = _check(rg, latitude, longitude, utc_offset, interval)
    assert verdict.status == "shifted", verdict.problems
    assert f"in 2021-{month:02d} measured Rg comes" in verdict.problems[0]
    assert ("later" if shift > 0 else "earlier") in verdict.problems[0]
    # the same record on time raises nothing
    assert _check(on_time, latitude, longitude, utc_offset, interval).problems == ()


def test_one_month_off_by_a_non_clock_step_is_not_named():
    """A single month whose Rg is 45 min later (no zone, daylight-saving or record step;
    Iqbal 1983, ch. 1 (m): zones differ by whole or half hours) is not read as a clock
    reset: the short-run rule asks for a step of a multiple of 30 min."""
    on_time = synthetic_rg(45.0, 10.0, 1.0, interval_minutes=30, seed=3)
    off = synthetic_rg(45.0, 10.0, 1.0, interval_minutes=30, seed=3, clock_shift_minutes=45.0)
    rg = on_time.where(on_time.index.month != 7, off)
    assert _check(rg, 45.0, 10.0, 1.0, 30).problems == ()


def test_a_frame_stamped_at_interval_ends_is_told_the_fix_in_python_terms():
    """review33: ``fluxpart.process`` on a frame indexed by interval ends (a logger's
    stamps) is refused by the clock check, as it should be (Rg 30 min after the sun on
    known-truth invented data), but the fix named only config-file settings, ``[input]
    time_marks`` and ``[processing] clock_check``, which a frame has not. The message now
    also says what a frame needs (an index of interval starts) and the Python setting."""
    import fluxpart
    from fluxpart import demo
    from fluxpart.errors import ConfigError

    frame, _ = demo.site_year(seed=0)
    ends = frame.copy()
    ends.index = ends.index + pd.Timedelta(minutes=30)
    with pytest.raises(ConfigError) as caught:
        fluxpart.process(ends, demo.site())
    message = str(caught.value)
    # the shift is estimated to within about 2 min (bench_clock.py: worst error 2.3 min)
    assert re.search(r"Rg comes (29|30|31) min later than the sun", message)
    assert "a frame given to fluxpart.process needs an index of interval starts" in message
    assert 'Config(clock_check="warn")' in message


def test_a_potential_of_another_record_is_not_taken_for_the_records_own():
    """check_clock's `potential` is taken only where it is the record's own (review77):
    the potential radiation of the record an hour later, of one record fewer or at another
    latitude gives the verdict of none passed (no Rg read as 60 min late); the record's
    own, the same verdict. Synthetic Rg (clock_sites: Kasten-Czeplak clouds (m)) at a
    correct clock, 120 days."""
    from fluxpart.solar import potential_radiation

    rg = synthetic_rg(48.0, 11.0, 1.0, days=120, seed=3)
    own = potential_radiation(rg.index, 48.0, 11.0, 1.0, 30)
    expected = _check(rg, 48.0, 11.0, 1.0, 30).to_dict()
    assert expected["status"] == "consistent"
    others = (own, potential_radiation(rg.index + pd.Timedelta(hours=1), 48.0, 11.0, 1.0, 30),
              own[:-1], potential_radiation(rg.index, 30.0, 11.0, 1.0, 30))
    for potential in others:
        assert _check(rg, 48.0, 11.0, 1.0, 30, potential=potential).to_dict() == expected


def _drifting(rg, minutes_per_month):
    """`rg` under a logger clock gaining `minutes_per_month` (30.44-day months): the value
    at stamp t is the true course at t - drift(t), linearly interpolated between records."""
    step = (rg.index[1] - rg.index[0]) / pd.Timedelta(minutes=1)
    days = (rg.index - rg.index[0]) / pd.Timedelta(days=1)
    lag = np.asarray(days) / 30.44 * minutes_per_month / step          # records
    position = np.arange(len(rg)) - lag
    return pd.Series(np.interp(position, np.arange(len(rg)), rg.to_numpy()), index=rg.index)


def test_a_drifting_clock_is_named_with_its_rate():
    """Known truth: a logger clock gaining 5 min a month (Rg timed against pvlib's sun, the
    stamps 0 to 60 min late from January to December) moves sunrise, noon and sunset alike
    by minutes that grow with time (Iqbal 1983, ch. 1 (m)). It was called "a tilted or
    partly shaded Rg sensor rather than a clock error" (round clocktrial55: six of twenty
    independent trial site-years, the run going on). Now named as a drift with its rate;
    the same year on time passes."""
    on_time = synthetic_rg(46.6, 11.2, 1.0, interval_minutes=30, seed=4, cloudiness="cloudy")
    verdict = _check(_drifting(on_time, 5.0), 46.6, 11.2, 1.0, 30)
    assert verdict.status == "shifted", verdict.notes
    text = next(p for p in verdict.problems if "drifts" in p)
    rate = float(re.search(r"comes ([\d.]+) min later against the sun each month", text)[1])
    assert abs(rate - 5.0) <= 1.0
    assert _check(on_time, 46.6, 11.2, 1.0, 30).problems == ()


@pytest.mark.parametrize("extra", [{"tilt_degrees": 3.0, "tilt_azimuth": 90.0},
                                   {"shade_azimuths": (240.0, 300.0)},
                                   {"wet_summer": 0.5}])
def test_a_tilted_shaded_or_monsoon_sensor_is_no_drift(extra):
    """A tilted sensor, a low western sun shaded and a monsoon move the monthly shifts with
    the seasons, a course that comes back within the year: no drift is named (the correct
    sites of bench_clock.py, at 35° S)."""
    rg = synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, seed=2, **extra)
    verdict = _check(rg, -35.3, 149.1, 10.0, 30)
    assert not any("drifts" in problem for problem in verdict.problems), verdict.problems


def test_a_tree_growing_east_of_the_sensor_is_no_drift():
    """A tree east of the sensor growing over the year (its top from 5° to 35° above the
    horizon, azimuths 30-150°) delays sunrise and the morning a little more each month:
    the peak and the mid-point of rise and fall move later by about the threshold over
    the year, on a line, as a clock drift would (round review86: 20 min and more on three
    draws). But the day grows shorter by twice the mid-point's move, where a clock keeps
    the day's length (Iqbal 1983, ch. 1 (m): sunrise and sunset move alike with the
    stamps' clock), and the rise and fall scatter about their line by more than the
    6 min allowed: no drift, no clock problem (with both guards lifted it is named, at
    2.2 min a month)."""
    rg = synthetic_rg(42.0, -72.0, -5.0, interval_minutes=30, seed=1,
                      shade_azimuths=(30.0, 150.0),
                      shade_elevation=lambda days: 5.0 + 30.0 * np.asarray(days) / 365.0)
    verdict = _check(rg, 42.0, -72.0, -5.0, 30)
    assert verdict.problems == (), verdict.problems
    used = verdict.months[verdict.months["used"]]
    late = used["edge_shift_minutes"].iloc[-3:].mean() - used["edge_shift_minutes"].iloc[:3].mean()
    assert late >= 10.0          # the obstruction does move the mid-point later over the year
