"""Layouts of the layouts26 round: a logger's table of another averaging period caught by
the path pattern, a spreadsheet's date and time cells saved with their hidden part, and a
spreadsheet's note of the delimiter on the first line.

Outside facts, each named beside its check: a spreadsheet keeps a date as a day number
whose time of day is its fraction, so a date cell holds midnight, a time cell holds day 0
(1899-12-30) and a time cell saved as a number is the fraction of a day, 13:30 = 0.5625
(Microsoft documentation of the 1900 date system (m)); Excel reads a first line "sep=X"
as the file's delimiter (Microsoft documentation of opening CSV files (m)); a record's
value is the mean over its own averaging period, so the hourly mean of two half-hours
is their average (common practice). Everything else is invented known truth: the records
as written.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import (
    ConfigError,
    DuplicateTimestampError,
    InputFileError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
)
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd"]


def _records(count=96 * 4):
    """Invented half-hourly records ending at 00:30 on 1 June: stamps and the five
    values of each (a diurnal Rg, so no two half-hours are alike)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = np.clip(800 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1)
    noise = np.random.default_rng(26).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.2 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd])


def _write(path, stamps, values, sep=",", head="stamp", first_line=None):
    lines = [] if first_line is None else [first_line]
    lines.append(sep.join([head] + NAMES))
    lines += [sep.join([stamp] + [f"{v:g}" for v in row]) for stamp, row in
              zip(stamps, values, strict=True)]
    path.write_text("\n".join(lines) + "\n")


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


@pytest.mark.parametrize(("step", "name"), [(2, "Mast_Flux60.dat"), (48, "Mast_Daily.dat")])
def test_table_of_another_period_caught_by_the_pattern_is_named(tmp_path, step, name):
    """A logger's hourly (or daily) table beside its half-hourly one, both caught by
    "Mast_*.dat": every hourly stamp is a half-hourly stamp too, with the mean of two
    half-hours (common practice), not the half-hour's value. Refused as before, but the
    line now names both files' steps and the fix (a narrower pattern); before, it said
    "remove one copy of the overlap", which names no copy."""
    ends, values = _records()
    _write(tmp_path / "Mast_Flux30.dat", [f"{e:%Y-%m-%d %H:%M}" for e in ends], values)
    means = values.reshape(-1, step, values.shape[1]).mean(axis=1)
    _write(tmp_path / name, [f"{e:%Y-%m-%d %H:%M}" for e in ends[step - 1::step]], means)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read([tmp_path / "Mast_Flux30.dat", tmp_path / name])
    message = str(caught.value)
    assert f"every {30 * step:g} minutes" in message and "every 30 minutes" in message
    assert "narrower pattern" in message
    assert "remove one copy of the overlap" not in message


def test_overlap_of_one_step_still_asks_to_remove_a_copy(tmp_path):
    """Two half-hourly downloads whose overlap disagrees in one value (a record edited
    in one copy): same step, so the line stays as it was (kept behaviour)."""
    ends, values = _records()
    stamps = [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    _write(tmp_path / "a.csv", stamps[:200], values[:200])
    edited = values[150:].copy()
    edited[10, 0] += 1.0
    _write(tmp_path / "b.csv", stamps[150:], edited)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read([tmp_path / "a.csv", tmp_path / "b.csv"])
    assert "remove one copy of the overlap" in str(caught.value)
    assert "averaging periods" not in str(caught.value)


def _two_columns(path, dates, times, values, sep=","):
    lines = [sep.join(["Date", "Time"] + NAMES)]
    lines += [sep.join([d, t] + [f"{v:g}" for v in row])
              for d, t, row in zip(dates, times, values, strict=True)]
    path.write_text("\n".join(lines) + "\n")


@pytest.mark.parametrize(("date_cell", "time_cell", "time_format", "expected"), [
    # a date cell formatted with a time: midnight after each date (Microsoft 1900 date
    # system: the time of day is the fraction, 0 for a date (m))
    ("%Y-%m-%d 00:00:00", "%H:%M:%S", "%Y-%m-%d %H:%M:%S", "%Y-%m-%d 00:00:00 %H:%M:%S"),
    # a time cell formatted with a date: day 0 is 1899-12-30 (same source (m))
    ("%d.%m.%Y", "30.12.1899 %H:%M", "%d.%m.%Y %H:%M", "%d.%m.%Y 30.12.1899 %H:%M"),
])
def test_spreadsheet_cells_with_their_hidden_part_name_the_format(tmp_path, date_cell,
                                                                 time_cell, time_format,
                                                                 expected):
    """The joined stamp holds two times (or two dates); refused as before, now naming
    the column, the text it carries and a time_format that reads past it, which reads
    every record at its stamp (known truth: the records as written). Before, the line
    gave no cause."""
    ends, values = _records()
    path = tmp_path / "sheet.csv"
    _two_columns(path, [f"{e:{date_cell}}" for e in ends], [f"{e:{time_cell}}" for e in ends],
                 values)
    with pytest.raises(TimestampError) as caught:
        _read(path, time_column=["Date", "Time"], time_format=time_format)
    assert f'time_format = "{expected}"' in str(caught.value)
    frame, _ = _read(path, time_column=["Date", "Time"], time_format=expected)
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)     # interval starts
    assert len(frame) == len(ends)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_time_as_a_fraction_of_a_day_is_named(tmp_path):
    """A time cell saved as a number: 00:30 is 1/48 = 0.020833 of a day (Microsoft 1900
    date system (m)). Named as such; before, the line guessed "a decimal day of year or
    hour"."""
    ends, values = _records()
    path = tmp_path / "sheet.csv"
    _two_columns(path, [f"{e:%Y-%m-%d}" for e in ends],
                 [f"{(e.hour * 60 + e.minute) / 1440:.6f}" for e in ends], values)
    with pytest.raises(TimestampError) as caught:
        _read(path, time_column=["Date", "Time"])
    assert "fraction of a day" in str(caught.value)
    assert "0.020833" in str(caught.value)


def test_decimal_hours_are_no_fraction_of_a_day(tmp_path):
    """Decimal hours (0.0 .. 23.5) are no fractions of a day: under a format ending in
    %H they are read as their clock (layouts40; refused before as "decimal fractions"),
    and the day-fraction hint stays away. Outside fact: 0.5 h is 30 minutes."""
    ends, values = _records()
    path = tmp_path / "hours.csv"
    starts = ends - pd.Timedelta("30min")
    _two_columns(path, [f"{e:%Y-%m-%d}" for e in starts],
                 [f"{e.hour + e.minute / 60:.1f}" for e in starts], values)
    frame, report = _read(path, time_column=["Date", "Time"], time_format="%Y-%m-%d %H",
                          time_marks="start")
    assert list(frame.index) == list(starts)
    assert report.stamp_conversions["decimal_fields"] == len(ends)


@pytest.mark.parametrize("note", ["sep=;", "SEP=;", '"sep=;";;;;;'])
def test_spreadsheet_delimiter_note_is_read_past(tmp_path, note):
    """A first line "sep=;" (Excel's note of the delimiter (m)) holds no name and no
    record: read past it, every record as written (known truth). Before, refused with
    "set [input] rows_before_header = 1"."""
    ends, values = _records()
    path = tmp_path / "excel.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values, sep=";", first_line=note)
    frame, _ = _read(path, delimiter=";")
    assert len(frame) == len(ends)
    assert np.allclose(frame["nee"].to_numpy(), values[:, 0])
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)


def test_spreadsheet_delimiter_note_against_the_setting_is_refused(tmp_path):
    """The note says ';' and [input] delimiter says ',': one of them is wrong, so the
    line names both and both fixes."""
    ends, values = _records()
    path = tmp_path / "excel.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values, sep=";", first_line="sep=;")
    with pytest.raises(InputFileError) as caught:
        _read(path)
    message = str(caught.value)
    assert "'sep=;'" in message and 'delimiter = ","' in message
    assert 'set delimiter = ";"' in message


def test_spreadsheet_delimiter_note_counted_by_the_user_reads_as_before(tmp_path):
    """rows_before_header = 1 set for the note: read as before (kept behaviour)."""
    ends, values = _records()
    path = tmp_path / "excel.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values, sep=";", first_line="sep=;")
    frame, _ = _read(path, delimiter=";", rows_before_header=1)
    assert np.allclose(frame["ustar"].to_numpy(), values[:, 1])


def test_ring_memory_read_from_its_start_is_named(tmp_path):
    """The newest records first, then the older ones ending one record before them (a
    ring buffer read from the start of its memory, not from its oldest entry (common
    practice)): sorting restores the record, and no stamp repeats. Refused as before,
    but the line now names the two runs and the sort; before it said "sorting would
    misplace them"."""
    ends, values = _records()
    stamps = [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    path = tmp_path / "ring.csv"
    _write(path, stamps[150:] + stamps[:150], np.vstack([values[150:], values[:150]]))
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert "two runs" in message and "sort a copy of the file by time" in message
    assert f"{ends[0]:%Y-%m-%d %H:%M} .. {ends[149]:%Y-%m-%d %H:%M}" in message
    assert "misplace" not in message


def test_clock_reset_to_a_default_date_keeps_its_line(tmp_path):
    """Rows stamped 2000-01-01 after a power loss mid-record: the later records run on
    after the first ones, so this is no pair of swapped runs; the line still says
    sorting would misplace them (kept behaviour)."""
    ends, values = _records()
    stamps = [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    stamps[200:204] = [f"2000-01-01 0{k}:00" for k in range(4)]
    path = tmp_path / "reset.csv"
    _write(path, stamps, values)
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(path)
    assert "misplace" in str(caught.value) and "two runs" not in str(caught.value)


def _stated(path, first_line, shift_hours=0.0, head="stamp"):
    ends, values = _records()
    stamps = [f"{e + pd.Timedelta(hours=shift_hours):%Y-%m-%d %H:%M}" for e in ends]
    _write(path, stamps, values, head=head, first_line=first_line)
    return ends, values


def test_clock_stated_above_the_header_against_time_zone_is_refused(tmp_path):
    """"Time zone: UTC+1" above the header and [input] time_zone = "UTC": read as UTC,
    every record moves an hour at a UTC+1 site. Before, the reader read it so without a
    word (the file's statement was judged only without time_zone); now refused naming
    both readings and both fixes."""
    path = tmp_path / "mast.csv"
    _stated(path, "Time zone: UTC+1")
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=1, time_zone="UTC")
    message = str(caught.value)
    assert "'Time zone: UTC+1'" in message and 'time_zone = "UTC"' in message
    assert "1 hour(s) apart" in message and "remove time_zone" in message


def test_utc_stated_against_a_civil_zone_is_refused_before_the_spring_hour(tmp_path):
    """"Time zone: UTC" over UTC stamps read as civil time of Europe/Berlin (UTC+1 in
    winter, UTC+2 in summer: time-zone database (m)): named as the clock the file states,
    1 to 2 hours apart, with time_zone = "UTC" as the fix; before, the refusal came from
    the skipped spring hour with "remove time_zone", an hour off still."""
    ends, values = _records()
    spring = pd.date_range("2021-03-28 00:30", periods=8, freq="30min")
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in spring], values[:8],
           first_line="Time zone: UTC")
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=1, time_zone="Europe/Berlin")
    message = str(caught.value)
    assert "states stamps in UTC" in message and "1 to 2 hour(s) apart" in message
    assert 'set time_zone = "UTC"' in message


def test_time_column_named_for_another_clock_than_time_zone_is_refused(tmp_path):
    """A time column "Zeit (MEZ)" (Central European Time, UTC+1 (m)) read with
    time_zone = "UTC": refused naming both readings."""
    path = tmp_path / "mast.csv"
    _stated(path, None, head="Zeit (MEZ)")
    with pytest.raises(ConfigError) as caught:
        _read(path, time_column="Zeit (MEZ)", time_zone="UTC")
    assert "named for stamps in UTC+1" in str(caught.value)
    assert "remove time_zone" in str(caught.value)


@pytest.mark.parametrize(("first_line", "time_zone", "shift"), [
    ("Time zone: UTC", "UTC", -1.0),            # a UTC logger, said twice
    ("Logger clock: CEST", "Europe/Berlin", 0.0),   # Berlin's summer time (tz database (m))
    ("Time zone: Europe/Berlin", "Europe/Berlin", 0.0),
])
def test_clock_stated_as_time_zone_reads(tmp_path, first_line, time_zone, shift):
    """A statement that time_zone keeps (its standard or its summer offset) reads as
    before (kept behaviour; known truth: the values as written)."""
    path = tmp_path / "mast.csv"
    ends, values = _stated(path, first_line, shift_hours=shift)
    frame, _ = _read(path, rows_before_header=1, time_zone=time_zone)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_midnight_stamped_at_the_last_minute_of_the_day_is_named(tmp_path):
    """Every record ending at midnight stamped 23:59 of the day it ends (the end of a day
    is 24:00, ISO 8601-1 (m)): the steps around it are 29 and 31 minutes. Refused as
    before, now naming the 23:59 stamps and the fix; before, the spacing alone."""
    ends, values = _records()
    stamps = [f"{e - pd.Timedelta(minutes=1):%Y-%m-%d %H:%M}" if e.hour == 0 and e.minute == 0
              else f"{e:%Y-%m-%d %H:%M}" for e in ends]
    path = tmp_path / "mast.csv"
    _write(path, stamps, values)
    with pytest.raises(SpacingError) as caught:
        _read(path)
    message = str(caught.value)
    midnights = sum(e.hour == 0 and e.minute == 0 for e in ends)
    assert f"is 23:59 ({midnights} of them)" in message and "24:00" in message


def test_a_clock_off_by_a_minute_keeps_its_line(tmp_path):
    """Stamps at minute 1 and 31 from a day on (a clock set by hand): not the 23:59
    pattern, so the line stays the grid's (kept behaviour)."""
    ends, values = _records()
    stamps = [f"{e + pd.Timedelta(minutes=1 if k >= 100 else 0):%Y-%m-%d %H:%M}"
              for k, e in enumerate(ends)]
    path = tmp_path / "mast.csv"
    _write(path, stamps, values)
    with pytest.raises(Exception) as caught:
        _read(path)
    assert "23:59" not in str(caught.value)


def test_iso8601_stamps_without_offsets_are_judged_against_the_stated_clock(tmp_path):
    """time_format = "ISO8601" reads an offset where a stamp carries one (ISO 8601-1 (m));
    stamps without any are read as local standard time. "Time zone: UTC" above such
    stamps at a UTC+1 site was read an hour off without a word (the statement was not
    judged under "ISO8601"); now refused naming both readings."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e - pd.Timedelta(hours=1):%Y-%m-%dT%H:%M:%S}" for e in ends], values,
           first_line="Time zone: UTC")
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=1, time_format="ISO8601")
    assert "states stamps in UTC" in str(caught.value)
    assert 'set time_zone = "UTC"' in str(caught.value)
    # the fix it names reads every record at its time (known truth: UTC + 1 h = local)
    frame, _ = _read(path, rows_before_header=1, time_format="ISO8601", time_zone="UTC")
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_iso8601_stamps_with_z_under_a_utc_statement_read(tmp_path):
    """Stamps that carry the Z of UTC take their clock from it: the statement agrees, and
    the records read converted to local standard time (kept behaviour; known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e - pd.Timedelta(hours=1):%Y-%m-%dT%H:%M:%SZ}" for e in ends], values,
           first_line="Time zone: UTC")
    frame, _ = _read(path, rows_before_header=1, time_format="ISO8601")
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)
    assert np.allclose(frame["nee"].to_numpy(), values[:, 0])


def test_time_column_named_utc_under_iso8601_without_offsets_is_refused(tmp_path):
    """A column "time_utc" of ISO stamps without offsets: named for UTC, read as local
    standard time; refused naming both readings (silent before)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y-%m-%dT%H:%M:%S}" for e in ends], values, head="time_utc")
    with pytest.raises(ConfigError) as caught:
        _read(path, time_column="time_utc", time_format="ISO8601")
    assert "named for stamps in UTC" in str(caught.value)
