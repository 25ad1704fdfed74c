"""Tests of the stamp modules: parsing (fluxpart.timestamps), time zones
(fluxpart.time_zones), intervals
(fluxpart.stamp_sequence) and budget years (fluxpart.budget_calendar).

The reader's layouts are tested end to end in tests/test_io.py; these pin the pure
helpers against outside facts: the calendar (Python's datetime) and the IANA zone
database (the standard library's zoneinfo).
"""

from datetime import datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest

from fluxpart.budget_calendar import budget_year_edges, budget_year_numbers, budget_years
from fluxpart.errors import ConfigError, SpacingError, TimestampError
from fluxpart.stamp_sequence import infer_interval, interval_change_warning
from fluxpart.time_zones import check_time_zone
from fluxpart.timestamps import parse_stamps


def test_budget_year_edges_of_a_file_cut_by_end_stamp_dates():
    """End stamps 00:00 on 1 January .. 23:30 on 31 December (review 0.12.0, layout c84):
    the record's first interval is the last of the year before, and the year lacks its
    last; the fragment is left out, the last interval added, 17,520 records (365 days x
    48, the calendar) from 00:00 to 23:30."""
    starts = pd.date_range("2021-01-01 00:00", "2021-12-31 23:30", freq="30min") - pd.Timedelta(
        minutes=30)
    index, notes = budget_year_edges(starts, 30)
    assert len(index) == 365 * 48 and index.name == "time"
    assert (index[0], index[-1]) == (pd.Timestamp("2021-01-01 00:00"),
                                     pd.Timestamp("2021-12-31 23:30"))
    assert notes[0].startswith("2020: only 1 record(s) (2020-12-31 23:30 .. 2020-12-31 23:30")
    assert "left out of the run and not budgeted" in notes[0]
    assert notes[1].startswith("2021: 1 record(s) at its end (2021-12-31 23:30")
    assert "added as gaps and filled like any other, so the year is complete" in notes[1]


@pytest.mark.parametrize(("first", "last", "minutes", "year_start", "expected", "notes"), [
    # start stamps running to 00:00 of the next year: its one record left out
    ("2021-01-01 00:00", "2022-01-01 00:00", 30, "01-01",
     ("2021-01-01 00:00", "2021-12-31 23:30"), 1),
    # a day missing at each end of a two-year hourly record: both added
    ("2021-01-02 00:00", "2022-12-30 23:00", 60, "01-01",
     ("2021-01-01 00:00", "2022-12-31 23:00"), 2),
    # a July-June budget year: the edges follow year_start
    ("2021-06-30 23:30", "2022-06-30 23:00", 30, "07-01",
     ("2021-07-01 00:00", "2022-06-30 23:30"), 2),
    # partial years (more than a day absent) and whole ones are left as they are
    ("2021-03-01 00:00", "2021-12-31 00:00", 30, "01-01", None, 0),
    ("2021-01-01 00:00", "2021-12-31 23:30", 30, "01-01", None, 0),
    ("2021-01-01 00:00", "2021-12-30 23:00", 30, "01-01", None, 0),
    # two fragments of less than a day each: nothing left to keep, nothing changed
    ("2020-12-31 12:00", "2021-01-01 11:00", 30, "01-01", None, 0),
])
def test_budget_year_edges_leave_out_fragments_and_add_edges(first, last, minutes, year_start,
                                                             expected, notes):
    """Fragments under a day are left out, edges of at most a day added; else unchanged."""
    starts = pd.date_range(first, last, freq=f"{minutes}min")
    index, found = budget_year_edges(starts, minutes, year_start)
    assert len(found) == notes
    if expected is None:
        pd.testing.assert_index_equal(index, starts)
    else:
        assert (index[0], index[-1]) == tuple(pd.Timestamp(t) for t in expected)
        assert index.freq == pd.Timedelta(minutes=minutes)


def test_budget_years_calendar_default():
    """Default "01-01": the budget year is the calendar year of each interval start."""
    index = pd.date_range("2020-12-31 23:00", periods=4, freq="30min")
    table = budget_years(index)
    assert table["year"].tolist() == [2020, 2020, 2021, 2021]
    assert table["period_start"].iloc[2] == pd.Timestamp("2021-01-01")
    assert table["period_end"].iloc[2] == pd.Timestamp("2022-01-01")


def test_budget_years_southern_season():
    """"07-01": July to June; a year keeps the calendar year in which it starts."""
    index = pd.DatetimeIndex(["2021-06-30 23:30", "2021-07-01 00:00", "2022-02-28 12:00"])
    table = budget_years(index, "07-01")
    assert table["year"].tolist() == [2020, 2021, 2021]
    # a budget year is 365 or 366 days by the calendar (Python's datetime)
    length = (table["period_end"] - table["period_start"]).dt.days.tolist()
    assert length == [(datetime(2021, 7, 1) - datetime(2020, 7, 1)).days, 365, 365]


def test_budget_year_numbers_without_the_period_bounds():
    """The year alone: 30 June 23:30 belongs to the July-June year that began in 2020, the
    next half hour to the one beginning 1 July 2021 (calendar fact); as budget_years says."""
    index = pd.DatetimeIndex(["2021-06-30 23:30", "2021-07-01 00:00", "2021-12-31 23:30",
                              "2022-01-01 00:00"])
    years = budget_year_numbers(index, "07-01")
    assert years.dtype == np.int64
    assert years.tolist() == [2020, 2021, 2021, 2021]
    assert budget_year_numbers(index).tolist() == [2021, 2021, 2021, 2022]
    assert np.array_equal(years, budget_years(index, "07-01")["year"].to_numpy())


@pytest.mark.parametrize("value", ["7-1", "02-29", "13-01", "07/01", 701])
def test_budget_years_bad_setting(value):
    """A year_start that is not an MM-DD day of every year names the setting."""
    with pytest.raises(ConfigError, match=r"\[processing\] year_start"):
        budget_years(pd.DatetimeIndex(["2021-01-01"]), value)


def test_check_time_zone_standard_offset_from_zoneinfo():
    """The zone's standard offset is read from zoneinfo (utcoffset - dst), both hemispheres."""
    for zone, offset in (("Europe/Berlin", 1.0), ("Australia/Sydney", 10.0),
                         ("America/New_York", -5.0)):
        january = datetime(2021, 1, 15, tzinfo=ZoneInfo(zone))
        expected = (january.utcoffset() - january.dst()) / timedelta(hours=1)
        assert expected == offset
        assert check_time_zone(zone, offset) == zone
    with pytest.raises(ConfigError, match=r"UTC-5 but \[site\] utc_offset = -4"):
        check_time_zone("America/New_York", -4.0)


def test_parse_stamps_daylight_saving_against_zoneinfo():
    """Civil stamps across the autumn change map to UTC as zoneinfo says (fold 0 then 1)."""
    zone = ZoneInfo("Europe/Berlin")
    text = pd.Series(["2021-10-31 01:30", "2021-10-31 02:00", "2021-10-31 02:30",
                      "2021-10-31 02:00", "2021-10-31 02:30", "2021-10-31 03:00"])
    parsed = parse_stamps(text, "%Y-%m-%d %H:%M", time_columns=("t",), source="f",
                          lines=np.arange(6) + 2, utc_offset=1.0, time_zone="Europe/Berlin")
    expected = []
    for position, cell in enumerate(text):
        fold = 1 if position in (3, 4) else 0  # second occurrence: standard time
        local = datetime.strptime(cell, "%Y-%m-%d %H:%M").replace(tzinfo=zone, fold=fold)
        expected.append(local.astimezone(ZoneInfo("UTC")).replace(tzinfo=None)
                        + timedelta(hours=1))
    assert list(parsed.stamps) == [pd.Timestamp(e) for e in expected]
    assert ((parsed.stamps[1:] - parsed.stamps[:-1]) == pd.Timedelta(minutes=30)).all()


def test_infer_interval():
    """The most common spacing is the interval; other spacings refuse."""
    stamps = pd.date_range("2021-01-01", periods=10, freq="60min")
    assert infer_interval(stamps) == 60
    with pytest.raises(SpacingError, match="most common spacing between stamps is 15"):
        infer_interval(pd.date_range("2021-01-01", periods=10, freq="15min"))


def test_mixed_naive_and_offset_stamps_refused():
    """ISO 8601 stamps of which only some carry an offset cannot be placed in time."""
    text = pd.Series(["2021-06-01T00:00Z", "2021-06-01T00:30", "2021-06-01T01:00Z"])
    with pytest.raises(TimestampError, match=r"line 3 of 'f' has stamp '2021-06-01T00:30' without "
                                        r"a UTC offset"):
        parse_stamps(text, "ISO8601", time_columns=("t",), source="f", lines=np.arange(3) + 2,
                     utc_offset=0.0)


@pytest.mark.parametrize("time_format", ["%Y%m%d%H%M", "%Y-%m-%d %H:%M:%S", "%d.%m.%Y %H:%M",
                                         "%m/%d/%Y %H:%M", "%Y-%m-%dT%H:%M"])
def test_fixed_width_stamps_equal_pandas_to_datetime(time_format):
    """Issue 17: stamps of fixed-width numeric formats read by array arithmetic equal
    pandas.to_datetime(format=...) (the general path; pandas 3.1) value and unit for value
    and unit, leap day included; a stamp off the layout (a letter, one digit short, the
    29th of February of a common year, hour 24) leaves the column to pandas."""
    from fluxpart.timestamps import _fixed_width_stamps, _to_datetime

    moments = pd.date_range("2019-12-31 22:00", "2020-03-01 02:00", freq="30min")
    text = pd.Series(moments.strftime(time_format), dtype="str", name="stamp")
    fast = _fixed_width_stamps(text, time_format)
    assert fast is not None
    pd.testing.assert_series_equal(fast, pd.to_datetime(text, format=time_format),
                                   check_exact=True)
    common_year_29 = pd.Timestamp("2021-02-28 10:30").strftime(time_format).replace("28", "29", 1)
    for bad in ("x" + text.iloc[3][1:], text.iloc[3][:-1], common_year_29):
        odd = text.copy()
        odd.iloc[3] = bad
        assert _fixed_width_stamps(odd, time_format) is None
        pd.testing.assert_series_equal(_to_datetime(odd, time_format, False),
                                       pd.to_datetime(odd, format=time_format, errors="coerce"),
                                       check_exact=True)


def test_hour_24_still_read_with_fixed_width_formats():
    """Issue 17: a compact stamp with hour 24 leaves the fast path; parse_stamps still reads
    it as midnight of the next day (the convention of the module docstring)."""
    text = pd.Series(["202106012330", "202106012400", "202106020030"], dtype="str")
    parsed = parse_stamps(text, "%Y%m%d%H%M", time_columns=("stamp",), source="f.csv",
                          lines=np.arange(3) + 2)
    assert list(parsed.stamps) == [pd.Timestamp("2021-06-01 23:30"),
                                   pd.Timestamp("2021-06-02 00:00"),
                                   pd.Timestamp("2021-06-02 00:30")]
    assert parsed.hour_24 == 1


def test_interval_change_within_the_record_is_warned():
    """A logger switched from 30- to 60-minute records in October: the stretch of 60-minute
    steps (a day or more) is named; every other half-hour was inserted as missing, each hourly
    record read as a half-hour, without a word. Records lost one at a time are not named."""
    half = pd.date_range("2021-01-01", "2021-09-30 23:30", freq="30min")
    hour = pd.date_range("2021-10-01", "2021-12-31 23:00", freq="60min")
    message = interval_change_warning(half.append(hour), 30)
    assert message is not None and "60 minutes apart for 2207 steps in a row" in message
    assert f"from record {len(half) + 1} (2021-10-01 00:00:00" in message
    # every other record lost for half a day only, or single losses: no warning
    short = half.delete(np.arange(1001, 1023, 2))
    lost = half.delete(np.arange(5, len(half), 7))
    assert interval_change_warning(short, 30) is None
    assert interval_change_warning(lost, 30) is None
    assert interval_change_warning(hour, 60) is None


@pytest.mark.parametrize("time_format", ["ISO8601", "%Y-%m-%dT%H:%M:%S%z"])
def test_stamps_in_utc_that_say_so_agree_with_time_zone_utc(time_format):
    """Stamps ending in Z (UTC, ISO 8601) read with [input] time_zone = "UTC", as the README
    advises for a logger kept on UTC, are the same instants as without it; before, the
    two were refused as contradicting each other."""
    text = pd.Series(["2021-06-01T00:00:00Z", "2021-06-01T00:30:00Z", "2021-06-01T01:00:00Z"])
    arguments = dict(time_columns=("t",), source="f", lines=np.arange(3) + 2, utc_offset=1.0)
    plain = parse_stamps(text, time_format, **arguments)
    with_zone = parse_stamps(text, time_format, **arguments, time_zone="UTC")
    assert list(with_zone.stamps) == list(plain.stamps)
    # local standard time of a site at UTC+1 (ISO 8601: Z is UTC)
    assert plain.stamps[0] == pd.Timestamp("2021-06-01 01:00")


@pytest.mark.parametrize(("zone", "utc_offset"), [("UTC", 2.0), ("Europe/Berlin", 1.0),
                                                  ("Australia/Melbourne", 10.0)])
def test_daylight_saving_count_is_that_of_the_zone(zone, utc_offset):
    """Only stamps the time-zone database puts in summer time count as daylight saving;
    stamps of a logger kept on UTC at a UTC+2 site are counted as moved from UTC (before,
    all 8352 of a trial site's UTC stamps were reported as "daylight-saving stamp(s) moved
    back one hour"; fifth independent trial, site P1)."""
    # a year of hourly civil stamps as the zone's clock shows them (zoneinfo of the standard
    # library is the outside reference: dst() says which instants are summer time)
    instants = pd.date_range("2021-01-01", "2022-01-01", freq="h", inclusive="left", tz="UTC")
    civil = instants.tz_convert(zone).tz_localize(None)
    text = pd.Series(civil.strftime("%Y-%m-%d %H:%M"))
    parsed = parse_stamps(text, "%Y-%m-%d %H:%M", time_columns=("t",), source="f",
                          lines=np.arange(len(text)) + 2, utc_offset=utc_offset,
                          time_zone=zone)
    summer = sum(1 for moment in instants.tz_convert(zone).to_pydatetime() if moment.dst())
    assert parsed.daylight_saving == summer
    assert parsed.utc_zone == (len(text) if zone == "UTC" else 0)
    expected = instants.tz_localize(None) + pd.Timedelta(hours=utc_offset)
    assert list(parsed.stamps) == list(expected)
