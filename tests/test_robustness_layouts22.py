"""Layouts of the layouts22 round: files that say where their stamps sit in the interval
and on which clock (in the time column's name, a second stamp column, a line above the
header, the units line), stamps half an interval off the clock grid, a month file stamped
at the other end of the interval, and a logger on UTC at a site whose offset is not a
whole number of intervals.

Outside facts, each named beside its check: an averaging interval runs from its start
stamp to its end stamp, one record step apart, and fluxes are averaged over 30 or 60
minutes beginning on the hour and half hour (Aubinet, Vesala and Papale 2012, Eddy
Covariance, Springer (m)); UTC offsets are written ``±hh``, ``±hhmm`` or ``±hh:mm``
(ISO 8601-1:2019 (m)); Nepal keeps UTC+05:45 (the IANA time zone database, read through
the standard library's ``zoneinfo``); exports that write both stamps name them for the
interval's start and end, and logger headers state the clock in a "Time zone" line
(common practice). Everything else is invented known truth: the records as written.
"""

from datetime import datetime
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.budget_calendar import budget_year_edges
from fluxpart.errors import ConfigError, DuplicateTimestampError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_places import (
    column_place,
    column_utc_offset,
    half_interval_message,
    stated_offset,
    stated_place,
)

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
FORMAT = "%Y-%m-%d %H:%M"


def _read(path, time_column="stamp", **kwargs):
    options = {"columns": MAPPING, "time_column": time_column, "time_format": FORMAT,
               "time_marks": "end", "site": SITE}
    options.update(kwargs)
    return read_table(path, **options)


def _with_stamps(records, **columns):
    """The records with their stamp column replaced by `columns` (name -> stamps)."""
    body = records.drop(columns="stamp")
    front = pd.DataFrame({name: stamps.strftime(FORMAT) for name, stamps in columns.items()})
    return pd.concat([front, body], axis=1)


# ------------------------------------------------------------------- the column's name
@pytest.mark.parametrize(("column", "marks", "named"), [
    ("period_start", "end", "start"),
    ("TimeEnd", "start", "end"),
    ("t_begin", "middle", "start"),
    ("Zeit_Ende", "start", "end"),        # German "end" (common practice)
    ("Time_mid", "end", "middle"),
])
def test_a_time_column_named_for_another_place_is_refused_naming_both(tmp_path, column,
                                                                      marks, named):
    """A column named for the interval's start read with time_marks = "end" (or any
    other disagreement) was read without a word, every record an interval (or half of
    one) early or late; `run`'s clock check caught the whole interval only where Rg
    resolves it. Now refused, naming the column, both places and both fixes."""
    starts, records = _tower(periods=48 * 3)
    shift = {"start": 0, "middle": 15, "end": 30}[named]
    _with_stamps(records, **{column: starts + pd.Timedelta(minutes=shift)}).to_csv(
        tmp_path / "a.csv", index=False)
    with pytest.raises(ConfigError) as caught:
        _read(tmp_path / "a.csv", time_column=column, time_marks=marks)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"{column!r} is named for the interval's {named}" in message
    assert f'set time_marks = "{named}" if the name is right' in message
    assert "rename the column" in message
    frame, _ = _read(tmp_path / "a.csv", time_column=column, time_marks=named)
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"),
                                  check_exact=True)
    np.testing.assert_array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())


def test_date_and_time_columns_are_judged_each():
    """Of a date and a time column, the time column's name counts (common practice:
    "Date", "EndTime")."""
    assert column_place("EndTime") == "end" and column_place("Date") is None
    assert column_place("stamp_start") == "start"
    assert column_place("endtime") == "end"
    # words that only contain the letters, or name two places, say nothing
    assert column_place("weekend") is None and column_place("start_end") is None
    assert column_place("logger_stamp") is None


def test_utc_offsets_in_names_read_as_iso_8601_writes_them():
    """ISO 8601-1:2019 (m): ``±hh``, ``±hhmm``, ``±hh:mm``; UTC and GMT alone are 0."""
    assert column_utc_offset("timestamp_utc") == 0
    assert column_utc_offset("DateTimeGMT") == 0 and column_utc_offset("UTCTime") == 0
    assert column_utc_offset("Time (UTC+1)") == 1
    assert column_utc_offset("time_UTC-05:00") == -5
    assert column_utc_offset("stamp UTC+0545") == 5.75
    assert column_utc_offset("stamp") is None and column_utc_offset("cutc") is None


def test_a_time_column_named_for_utc_without_time_zone_is_refused(tmp_path):
    """Stamps in a column named for UTC, read without time_zone as the site's standard
    time (UTC+1), sat every record an hour late. Refused naming both clocks and both
    fixes; time_zone = "UTC" reads them at their time (known truth: the invented stamps
    in UTC are an hour before the local ones)."""
    starts, records = _tower(periods=48 * 3)
    _with_stamps(records, stamp_utc=starts + pd.Timedelta(minutes=30) - pd.Timedelta(hours=1)
                 ).to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(ConfigError) as caught:
        _read(tmp_path / "a.csv", time_column="stamp_utc")
    message = str(caught.value)
    assert "'stamp_utc' is named for stamps in UTC" in message
    assert "read as the site's local standard time (UTC+1, [site] utc_offset = 1)" in message
    assert 'set time_zone = "UTC" if the name is right' in message
    frame, _ = _read(tmp_path / "a.csv", time_column="stamp_utc", time_zone="UTC")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))
    # a name giving the site's own offset agrees
    _with_stamps(records, **{"time (UTC+1)": starts + pd.Timedelta(minutes=30)}).to_csv(
        tmp_path / "b.csv", index=False)
    frame, _ = _read(tmp_path / "b.csv", time_column="time (UTC+1)")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))


# ------------------------------------------------------------------ two stamp columns
@pytest.mark.parametrize(("mapped", "marks", "place"), [
    ("ts1", "end", "start"), ("ts2", "start", "end"), ("ts1", "middle", "start")])
def test_a_second_stamp_column_one_interval_away_tells_the_place(tmp_path, mapped, marks,
                                                                 place):
    """A file with both stamps of each interval under names that do not tell (ts1, ts2):
    the column one step later holds the ends (Aubinet et al. 2012 (m)). The mapped
    column read at the wrong place was read without a word; now refused naming both
    columns and both settings; the right setting reads the records as written."""
    starts, records = _tower(periods=48 * 3)
    _with_stamps(records, ts1=starts, ts2=starts + pd.Timedelta(minutes=30)).to_csv(
        tmp_path / "a.csv", index=False)
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "a.csv", time_column=mapped, time_marks=marks)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    other = "ts2" if mapped == "ts1" else "ts1"
    assert f"column {other!r} of" in message and "30 minutes" in message
    assert f"so {mapped!r} marks the intervals' {place}s" in message
    assert f'set time_marks = "{place}"' in message
    for column, right in (("ts1", "start"), ("ts2", "end")):
        frame, _ = _read(tmp_path / "a.csv", time_column=column, time_marks=right)
        pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))


# ----------------------------------------------------------- stated above the header
@pytest.mark.parametrize(("line", "stated"), [
    ("Time zone: UTC", 0.0), ("# tz = +02:00", 2.0), ("UTC offset: 1", 1.0),
    ("TimeZone=GMT-3", -3.0), ("Timestamps in UTC+1", 1.0), ("Time zone (UTC+05:30)", 5.5),
    ("Logger clock synchronised to UTC by GPS; stamps in local time (UTC+1)", None),
    ("Station: Quillmoor (fictional)", None), ("timezone: Europe/Berlin", 1.0)])
def test_clock_lines_are_read_as_iso_8601_offsets(line, stated):
    """ISO 8601-1:2019 (m) offsets after a "time zone" key, or "in UTC" (common
    practice); a line naming UTC in passing states no offset; a zone name states its
    standard offset (since layouts24; Berlin's winter offset from the standard library's
    zoneinfo, UTC+1)."""
    assert stated_offset(line) == stated


def test_place_lines():
    assert stated_place("Timestamps mark the start of the averaging period") == "start"
    assert stated_place("time = end of interval") == "end"
    assert stated_place("start of interval .. end of interval") is None
    assert stated_place("Logger started 2021-06-01") is None


@pytest.mark.parametrize(("above", "cell", "expected"), [
    (["Station: invented", "Time zone: UTC"], None, "line 2 of"),
    (["# tz = +02:00"], None, "line 1 of"),
    ([], "UTC", "the cell under 'stamp' on line 2 of"),
    ([], "yyyy-mm-dd hh:mm UTC", "the cell under 'stamp' on line 2 of"),
])
def test_a_clock_stated_in_the_file_other_than_read_is_refused(tmp_path, above, cell,
                                                               expected):
    """A logger's header saying "Time zone: UTC" (or a units line writing UTC under the
    time column) while the stamps are read as local standard time UTC+1: every record an
    hour off, without a word before. Refused naming the line and both readings; the same
    file with the clock it states reads."""
    starts, records = _tower(periods=48 * 3)
    text = records.to_csv(index=False)
    head, body = text.split("\n", 1)
    after = 0
    if cell is not None:
        head += "\n" + cell + ",umol m-2 s-1,m s-1,W m-2,degC,hPa"
        after = 1
    (tmp_path / "a.csv").write_text("".join(f"{line}\n" for line in above) + head + "\n"
                                    + body)
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "a.csv", rows_before_header=len(above), rows_after_header=after)
    message = str(caught.value)
    assert message.startswith(expected)
    assert "read as the site's local standard time (UTC+1" in message
    assert "correct that line in a copy of the file" in message
    zone = "UTC" if "+02" not in "".join(above) else "Etc/GMT-2"
    if zone == "UTC":
        frame, _ = _read(tmp_path / "a.csv", rows_before_header=len(above),
                         rows_after_header=after, time_zone=zone)
        # known truth: stamps read as UTC land an hour later in UTC+1
        assert frame.index[0] == starts[0] + pd.Timedelta(hours=1)


def test_a_place_stated_above_the_header_other_than_read_is_refused(tmp_path):
    starts, records = _tower(periods=48 * 3)
    (tmp_path / "a.csv").write_text("Timestamps mark the end of the averaging period\n"
                                    + records.to_csv(index=False))
    with pytest.raises(TimestampError, match=r"states stamps at the interval's end, but "
                                             r'time_marks = "start"'):
        _read(tmp_path / "a.csv", rows_before_header=1, time_marks="start")
    frame, _ = _read(tmp_path / "a.csv", rows_before_header=1)
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))


# ------------------------------------------------------- half an interval off the grid
def test_middle_stamps_read_as_ends_are_refused_naming_both_readings(tmp_path):
    """Stamps at :15 and :45 (the middle of 30-minute intervals on the hour and half
    hour, Aubinet et al. 2012 (m)) read as ends ran with a warning, every record 15
    minutes early. Two readings (middle stamps, a clock 15 minutes off): refused naming
    both. Stamps on the grid read as middles likewise name start and end."""
    starts, records = _tower(periods=48 * 3)
    _with_stamps(records, stamp=starts + pd.Timedelta(minutes=15)).to_csv(
        tmp_path / "a.csv", index=False)
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert '[input] time_marks = "end": every interval then starts at minute 45' in message
    assert 'set time_marks = "middle"' in message and "15 minutes off" in message
    frame, _ = _read(tmp_path / "a.csv", time_marks="middle")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))
    records.to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(TimestampError, match=r'set time_marks = "start" or "end"'):
        _read(tmp_path / "b.csv", time_marks="middle")


def test_a_few_records_half_off_are_left_to_the_warning():
    """Only where 99 % or more of the records sit so: a day of them in a longer record
    is the existing warning's case."""
    grid = pd.date_range("2021-06-01", periods=48 * 10, freq="30min")
    half = grid + pd.Timedelta(minutes=15)
    assert half_interval_message(half, 30, "end") is not None
    mixed = grid[:-48].append(half[-48:])
    assert half_interval_message(mixed, 30, "end") is None
    assert half_interval_message(grid, 30, "end") is None


def test_a_logger_on_utc_at_a_site_at_five_and_three_quarter_hours_is_read_off_grid(
        tmp_path):
    """Nepal keeps UTC+05:45 (IANA time zone database via zoneinfo). A logger there on
    UTC stamps its 30-minute records at :00 and :30 UTC, which are :45 and :15 in local
    standard time: off the grid by right, so not refused (warned as before), and the
    budget year's edge records added as gaps keep that minute (they were put on the
    grid, so that the run found no record with a value at all and stopped)."""
    offset = ZoneInfo("Asia/Kathmandu").utcoffset(datetime(2021, 6, 1))
    hours = offset.total_seconds() / 3600
    assert hours == 5.75
    site = Site(name="invented", latitude=27.7, longitude=85.3, utc_offset=hours)
    starts, records = _tower(periods=48 * 3)
    records.to_csv(tmp_path / "a.csv", index=False)
    frame, report = _read(tmp_path / "a.csv", time_zone="UTC", site=site)
    assert frame.index[0] == starts[0] + offset
    assert any("minute 45 of the hour" in w for w in report.warnings)
    # the budget year's edges keep the records' minute
    year = pd.date_range("2021-01-01 04:45", "2021-12-31 23:45", freq="30min")
    index, notes = budget_year_edges(year, 30)
    assert index[0] == pd.Timestamp("2021-01-01 00:15") and index[-1] == year[-1]
    assert set(index.minute) == {15, 45} and notes
    # on the grid, the edges are what they were (from midnight)
    grid = pd.date_range("2021-01-01 04:30", "2021-12-31 23:30", freq="30min")
    index, _ = budget_year_edges(grid, 30)
    assert index[0] == pd.Timestamp("2021-01-01 00:00")


# ------------------------------------------------- a month file stamped at the other end
def test_a_month_file_stamped_at_the_other_end_names_it_not_the_overlap(tmp_path):
    """Month files of end stamps, one of them written with start stamps (a logger
    program changed): it meets the month before in one stamp with other values, and the
    refusal said "remove one copy of the overlap", after which that month was read 30
    minutes early without a word. Now the file is named with the record it leaves empty
    at its other end (invented known truth)."""
    starts, records = _tower(periods=48 * 30)
    paths = []
    for number in range(3):
        part = records.iloc[number * 480:(number + 1) * 480].copy()
        if number == 1:
            part["stamp"] = (pd.to_datetime(part["stamp"]) - pd.Timedelta(minutes=30)
                             ).dt.strftime(FORMAT)
        paths.append(tmp_path / f"m{number}.csv")
        part.to_csv(paths[-1], index=False)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(paths)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    hole = pd.Timestamp(records["stamp"].iloc[959])
    assert f"{str(paths[1])!r} meets its neighbour in this one stamp" in message
    assert f"leaves stamp {hole} after its last record empty" in message
    assert "one record (30 minutes) early" in message
    assert "remove one copy" not in message


# --------------------------------------------------------- repeated stamps in one file
def test_a_switch_from_end_to_start_stamps_in_one_file_names_both_readings(tmp_path):
    """A logger that changed from end to start stamps mid-file writes the stamp of the
    change twice (the record ending there and the one starting there) and every later
    record one step early. The refusal said "keep one of them in a copy", after which
    half the file read 30 minutes early. Now both readings are named (invented known
    truth: the records as written)."""
    starts, records = _tower(periods=48 * 6)
    ends = starts + pd.Timedelta(minutes=30)
    stamps = ends.where(np.arange(len(ends)) < 144, starts)
    _with_stamps(records, stamp=stamps).to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"stamp '{ends[143]:%Y-%m-%d %H:%M}' occurs 2 times" in message
    assert "(lines 145, 146)" in message
    assert "from stamping each interval's end to stamping its start" in message
    assert "or it wrote one record twice" in message


def test_a_twelve_hour_clock_without_am_pm_is_named():
    """Python's strftime: %I is the hour of a 12-hour clock (01..12) and %p its AM/PM;
    stamps written with %I alone never pass 12 and repeat twice a day."""
    starts = pd.date_range("2021-06-01 00:30", periods=48 * 3, freq="30min")
    written = pd.to_datetime(starts.strftime("%Y-%m-%d %I:%M"), format=FORMAT)
    assert written.hour.max() == 12
    from fluxpart.stamp_places import repeated_stamp_hint
    assert "12-hour clock written without AM/PM" in repeated_stamp_hint(written)
    # a record written twice on consecutive lines of a regular file: both readings
    twice = starts[:50].append(starts[49:50]).append(starts[50:])
    assert "wrote one record twice" in repeated_stamp_hint(twice)
    # two repeats, or an irregular file: no reading told
    assert repeated_stamp_hint(twice.append(starts[10:11])) is None


def test_daily_summary_lines_stamped_with_the_date_alone_are_named(tmp_path):
    """A logger's day table written into the file of its 30-minute table, each line
    stamped with the date alone after the day's last record (common practice): read as
    00:00 (the reader's date-alone rule), each collides with the midnight record and was
    told "keep one of them"; now named as daily summary lines (invented known truth)."""
    starts, records = _tower(periods=48 * 4)
    lines = records.to_csv(index=False).splitlines()
    out = [lines[0]]
    for line in lines[1:]:
        out.append(line)
        if line[11:16] == "00:00":
            out.append(line[:10] + ",1.0,0.3,200.0,15.0,8.0")
    (tmp_path / "a.csv").write_text("\n".join(out) + "\n")
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "written once with its time and once as the date alone ('2021-06-02')" in message
    assert "4 day(s): daily summary lines among the records" in message


def test_a_second_stamp_column_on_another_clock_is_no_interval_end(tmp_path):
    """Hourly records with local standard stamps and a second column of the same stamps
    in UTC, an hour (one record) earlier at UTC+1 (common practice: exports write both
    clocks): named for its clock, it is passed over, and the file reads as written
    (invented known truth)."""
    starts, records = _tower(periods=48 * 3)
    hourly = records.iloc[::2].reset_index(drop=True)
    local = pd.DatetimeIndex(starts[::2])
    _with_stamps(hourly, stamp=local, stamp_utc=local - pd.Timedelta(hours=1)).to_csv(
        tmp_path / "a.csv", index=False)
    frame, _ = _read(tmp_path / "a.csv", time_marks="start")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(local, name="time"),
                                  check_names=False)
    # under a neutral name, the hour apart is offered as the other reading
    _with_stamps(hourly, stamp=local, other=local - pd.Timedelta(hours=1)).to_csv(
        tmp_path / "b.csv", index=False)
    with pytest.raises(TimestampError, match="unless 'other' holds the same stamps on a "
                                             "clock an hour apart"):
        _read(tmp_path / "b.csv", time_marks="start")
