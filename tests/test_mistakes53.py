"""Round mistakes53: a leap day absent between complete days, and uptake in bright frozen air.

Invented records only (known-truth tests of the two checks); the sources are named beside
each check.
"""
from __future__ import annotations

import calendar

import numpy as np
import pandas as pd

from fluxpart.frozen_uptake import frozen_daylight_uptake
from fluxpart.leap_day import missing_leap_day


def _records(year: int, days: int = 120, minutes: int = 30) -> pd.DataFrame:
    index = pd.date_range(f"{year}-01-01", periods=days * 1440 // minutes,
                          freq=f"{minutes}min")
    rng = np.random.default_rng(year)
    return pd.DataFrame({"nee": rng.normal(1.0, 0.5, len(index)),
                         "tair": rng.normal(0.0, 3.0, len(index))}, index=index)


def _dropped_day(frame: pd.DataFrame, day: str) -> pd.DataFrame:
    return frame[frame.index.normalize() != pd.Timestamp(day)]


def test_leap_day_absent_is_named_only_in_a_leap_year():
    # the Gregorian rule (Python's calendar.isleap, ISO 8601): 2020 and 2000 are leap
    # years, 2100 and 2021 are not
    assert calendar.isleap(2020) and calendar.isleap(2000)
    assert not calendar.isleap(2100) and not calendar.isleap(2021)
    text = missing_leap_day(_dropped_day(_records(2020), "2020-02-29"), 30.0)
    assert text is not None and "29 February 2020" in text
    assert "Check the year of the file's stamps" in text      # no column it was not given
    assert "2019 or 2021" in text
    # rows kept with every value missing read the same (the reader's regular grid)
    blank = _records(2000)
    blank.loc[blank.index.normalize() == pd.Timestamp("2000-02-29"), :] = np.nan
    assert "29 February 2000" in missing_leap_day(blank, 30.0)
    # a complete leap year, and a common year's 1 March missing, are not named
    assert missing_leap_day(_records(2020), 30.0) is None
    assert missing_leap_day(_dropped_day(_records(2021), "2021-03-01"), 30.0) is None


def test_leap_day_within_a_longer_outage_is_not_named():
    frame = _records(2024, minutes=60)
    gap = (frame.index >= "2024-02-28 12:00") & (frame.index < "2024-03-01 06:00")
    assert missing_leap_day(frame[~gap], 60.0) is None
    # the day before partly lost: an outage around the day, not a calendar
    frame.loc["2024-02-28 00:00":"2024-02-28 05:00", :] = np.nan
    assert missing_leap_day(_dropped_day(frame, "2024-02-29"), 60.0) is None
    # the empty day an hour late (stamps of another zone): still one day, named
    frame = _records(2024, minutes=60)
    late = (frame.index >= "2024-02-29 01:00") & (frame.index < "2024-03-01 01:00")
    assert "29 February 2024" in missing_leap_day(frame[~late], 60.0)


def _frozen_month(seed: int = 0):
    """A frozen month: respiration 0.3 µmol m-2 s-1 (Lloyd and Taylor 1994 at -8 °C, Rref
    2 at 10 °C, E0 309 K (m)), a random error of 0.5 (Richardson et al. 2006 (m)), no
    photosynthesis; Rg a clear winter day's course."""
    hours = np.arange(31 * 48) / 2.0 % 24
    rg = np.clip(400.0 * np.sin(np.pi * (hours - 8.0) / 8.0), 0.0, None)
    tair = -8.0 + 3.0 * (rg / 400.0)
    respiration = 2.0 * np.exp(309.0 * (1 / 56.02 - 1 / (tair + 273.15 - 227.13)))
    noise = np.random.default_rng(seed).normal(0.0, 0.5, hours.size)
    return respiration + noise, rg, tair


def test_frozen_daylight_uptake_named_for_webb_terms_left_out():
    nee, rg, tair = _frozen_month()
    assert frozen_daylight_uptake(nee, rg, tair) is None
    # Webb et al. (1980): the sensible-heat term (1 + μσ) (ρc / T) w'T', with ρc the CO2
    # density of 400 ppm by the ideal gas law and w'T' = H / (ρ cp)
    temperature = tair + 273.15
    rho_c = 400e-6 * 101325.0 / (8.314 * temperature) * 1e6          # µmol m-3
    rho_cp = 101325.0 / (287.05 * temperature) * 1005.0               # J m-3 K-1
    sensible = 0.3 * rg - 15.0                                          # W m-2
    lost = rho_c / temperature * sensible / rho_cp                     # µmol m-2 s-1
    assert 0.04 < np.median(lost[rg > 200] / sensible[rg > 200]) < 0.07
    text = frozen_daylight_uptake(nee - lost, rg, tair, {"nee": "co2_exchange"})
    assert text is not None and "'co2_exchange'" in text and "WPL" in text
    # a share too small to name: only a tenth of the terms left out
    assert frozen_daylight_uptake(nee - 0.1 * lost, rg, tair) is None
    # a warm month's uptake by day is a canopy's, not judged
    assert frozen_daylight_uptake(nee - lost, rg, tair + 15.0) is None


def test_leap_day_outage_of_a_day_from_another_hour_is_not_named():
    # round falsealarm55: a calendar without 29 February empties the day from the file
    # clock's midnight (local standard time, or UTC where the reader moved UTC stamps);
    # a power failure restored at the same hour the next day starts anywhere
    frame = _records(2024, minutes=60)
    outage = (frame.index >= "2024-02-28 16:00") & (frame.index < "2024-02-29 16:00")
    assert missing_leap_day(frame[~outage], 60.0, utc_offset=1.0) is None
    frame = _records(2020)
    outage = (frame.index >= "2020-02-29 07:30") & (frame.index < "2020-03-01 07:30")
    assert missing_leap_day(frame[~outage], 30.0, utc_offset=-7.0) is None
    # the same day empty from UTC's midnight at a site of UTC-7 (17:00 local): named
    moved = (frame.index >= "2020-02-28 17:00") & (frame.index < "2020-02-29 17:00")
    assert "29 February 2020" in missing_leap_day(frame[~moved], 30.0, utc_offset=-7.0)
    # one record late (time marks), an hour early (summer time): named
    for begin in ("2020-02-29 00:30", "2020-02-28 23:00"):
        late = (frame.index >= begin) & (frame.index < pd.Timestamp(begin) + pd.Timedelta(days=1))
        assert "29 February 2020" in missing_leap_day(frame[~late], 30.0, utc_offset=-7.0)
