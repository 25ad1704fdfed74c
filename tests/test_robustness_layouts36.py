"""Layouts of the layouts36 round: CR-only files with skipped lines, a second table below
the first, a time field of minutes since midnight.

Outside facts, each named beside its check: a line may end in CR alone (classic Mac OS
and some loggers' exports; Python's ``str.splitlines`` and the csv module count it as a
line end, common practice); Excel reads a first line "sep=;" as the file's delimiter
(Microsoft documentation (m)); a day holds 1,440 minutes (SI). A stamp that "starts" its interval heads the
averages over the minutes after it, one that "ends" it those before it (ISO 8601 time
intervals (m); the hour-ending convention of networks, common practice). Everything else
is invented known truth: the records as written.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021

from fluxpart.errors import InputFileError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_places import stated_offset, stated_place

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2", "rg": "sw", "tair": "t_air", "vpd": "vpd", "ustar": "us"}
UNITS_LINE = "-,umol m-2 s-1,W m-2,degC,kPa,m s-1"


def _read(path, **options):
    settings = {"time_column": "stamp", "time_format": "%Y%m%d%H%M", "time_marks": "end"}
    settings.update(options)
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE, **settings)


def _assert_records(read, frame, ends):
    starts = pd.DatetimeIndex(ends - pd.Timedelta("30min"), name="time")
    assert read.index.equals(starts.as_unit(read.index.unit))
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())
    np.testing.assert_array_equal(read["ustar"].to_numpy(), frame["us"].to_numpy())


@pytest.mark.parametrize("above, rows_before, rows_after", [
    ("", 0, 1),                                  # a units line under the header
    ("Quillmoor logger 2\r", 1, 0),              # a title line
    ("Quillmoor logger 2\r\r", 2, 1),            # a title, a blank line and a units line
])
def test_cr_only_files_with_skipped_lines_read_every_record(tmp_path, above, rows_before,
                                                            rows_after):
    """Before: pandas read an emptied line between CR-only line ends as part of the next
    line end, so the first record under a units line was dropped without a word (17,519
    of 17,520 records of a year), a title line made a record the header, and a title,
    a blank and a units line crashed with IndexError."""
    frame, ends = _records()
    lines = frame.to_csv(index=False, lineterminator="\r").split("\r", 1)
    units = UNITS_LINE + "\r" if rows_after else ""
    path = tmp_path / "t.csv"
    path.write_bytes((above + lines[0] + "\r" + units + lines[1]).encode())
    read, report = _read(path, rows_before_header=rows_before, rows_after_header=rows_after)
    _assert_records(read, frame, ends)
    assert report.records_read == len(frame)


def test_a_cr_only_file_under_a_spreadsheet_delimiter_note_is_read(tmp_path):
    """Before: the note "sep=;" of a CR-only file was not found (only LF ended its line)
    and the file was refused with "set rows_before_header = 1"; an LF file was read."""
    frame, ends = _records()
    path = tmp_path / "t.csv"
    path.write_bytes(("sep=;\r" + frame.to_csv(index=False, sep=";", lineterminator="\r"))
                     .encode())
    read, _ = _read(path, delimiter=";")
    _assert_records(read, frame, ends)


def test_a_cr_only_line_stating_start_stamps_is_judged(tmp_path):
    """Before: under two CR-only lines above the header a record was taken for the header
    ("no such column"); now the line stating start stamps is judged as in an LF file,
    and time_marks = "end" refused naming both readings."""
    frame, _ = _records()
    path = tmp_path / "t.csv"
    path.write_bytes(("Quillmoor tower\rTime stamp refers to the beginning of the averaging "
                      "period\r" + frame.to_csv(index=False, lineterminator="\r")).encode())
    with pytest.raises(TimestampError, match=r"line 2 .*start.*time_marks = \"end\""):
        _read(path, rows_before_header=2)


def test_a_second_table_below_the_first_is_named_by_its_header(tmp_path):
    """Before: a table of rain and soil heat flux written under the flux table was named
    "a logger program that removed a column and wrote no new header line? ... give the
    part from there its own header line", which it has."""
    frame, _ = _records()
    other = pd.DataFrame({"stamp": frame["stamp"], "rain_mm": 0.0, "soil_heat": 12.5})
    path = tmp_path / "t.csv"
    path.write_text(frame.to_csv(index=False) + "\n" + other.to_csv(index=False))
    with pytest.raises(InputFileError, match=r"line 483 \('stamp,rain_mm,soil_heat'\) is a "
                                             r"header "
                                             r"line of 3 names where the header has 6.*"
                                             r"second table"):
        _read(path)


def test_a_time_field_of_minutes_since_midnight_is_named(tmp_path):
    """Before: "2021-06-01 60" under "%Y-%m-%d %M" was refused naming no cause; a day
    holds 1,440 minutes (SI), and 60 to 99 past a hundred is no hhmm clock."""
    frame, ends = _records()
    minutes = ends.hour * 60 + ends.minute
    frame.insert(1, "date", (ends - pd.Timedelta("1s")).strftime("%Y-%m-%d"))
    frame["minute"] = np.where(minutes == 0, 1440, minutes)
    path = tmp_path / "t.csv"
    path.write_text(frame.drop(columns="stamp").to_csv(index=False))
    with pytest.raises(TimestampError, match=r"counts the minutes of the day \('60' is "
                                             r"01:00\)"):
        _read(path, time_column=["date", "minute"], time_format="%Y-%m-%d %M")


@pytest.mark.parametrize("hhmm", ["{:d}", "{:04d}"])
def test_year_day_of_year_and_hhmm_with_2400_read_record_for_record(tmp_path, hhmm):
    """Kept: integer hhmm (unpadded 30, 100, ... or padded 0030) with midnight as 2400 of
    the day it ends, the day of year counted from 001 (ISO 8601 ordinal dates)."""
    frame, ends = _records()
    clock = ends.hour * 100 + ends.minute
    day = ends - pd.Timedelta("1s")
    table = frame.drop(columns="stamp")
    table.insert(0, "hhmm", [hhmm.format(v) for v in np.where(clock == 0, 2400, clock)])
    table.insert(0, "doy", day.day_of_year)
    table.insert(0, "year", day.year)
    path = tmp_path / "t.csv"
    path.write_text(table.to_csv(index=False))
    read, _ = _read(path, time_column=["year", "doy", "hhmm"], time_format="%Y %j %H%M")
    _assert_records(read, frame, ends)


@pytest.mark.parametrize("line, place", [
    # unread before layouts36, so that a wrong time_marks read the file an interval off
    ("Averages are labelled with the start time of the interval", "start"),
    ("Each record is stamped at the start of its 30 min average", "start"),
    ("Data are 30-min averages ending at the time shown", "end"),
    ("Values are means of the 30 minutes preceding the time stamp", "end"),
    ("Values are means of the 30 minutes following the time stamp", "start"),
    ("Values refer to the half hour before the timestamp", "end"),
    ("Values refer to the half hour after the timestamp", "start"),
    ("time: left edge of averaging window", "start"),
    ("time: right edge of averaging window", "end"),
    ("Stamp gives the time at which the averaging period closes", "end"),
    ("The timestamp is centred on the averaging period", "middle"),
    ("Timestamps are interval midpoints", "middle"),
    ("timestamp_position = start", "start"), ("stamp_position: end", "end"),
    ("Timestamp convention: interval ending", "end"),
    # still no statement: a change dated, an event's period, a note in passing
    ("Values before the timestamp change in May were corrected", None),
    ("Logging period ends 2021-12-31", None), ("Calibration period end", None),
    ("Time series: the measurement period starts in June", None),
    ("Records dated at the end 2021-06-30 were removed", None),
    ("Stamps shifted by -30 min to interval starts", None),    # a conversion told
    ("Stamp gives the time at which the averaging period ends", "end"),
    # review47: honest notes of a gap or an event near a stamp, read as end stamps before
    ("Data gaps of 30 min before the timestamp change were removed", None),
    ("30 min before the timestamp of each logger reboot data were discarded", None),
    ("Values are 30-min averages over the period preceding the time stamp", "end"),
    ("Despiking window: the 3 h after the time stamp", None),     # not a record's length
    ("Periods marked by the end of a calibration run were removed", None),
    ("Values are means of the 60 minutes before the timestamp", "end"),
])
def test_places_phrased_around_the_stamps_are_read(line, place):
    assert stated_place(line) == place


def test_start_stamps_stated_in_other_words_refuse_end_marks(tmp_path):
    """Before: "Averages are labelled with the start time of the interval" was not read,
    and start stamps under time_marks = "end" were read 30 minutes late without a word."""
    frame, ends = _records()
    frame["stamp"] = (ends - pd.Timedelta("30min")).strftime("%Y%m%d%H%M")
    path = tmp_path / "t.csv"
    path.write_text("Quillmoor tower\nAverages are labelled with the start time of the "
                    "interval\n" + frame.to_csv(index=False))
    with pytest.raises(TimestampError, match=r"line 2 .*states stamps at the interval's "
                                             r"start, but time_marks = \"end\""):
        _read(path, rows_before_header=2)
    read, _ = _read(path, rows_before_header=2, time_marks="start")
    _assert_records(read, frame, ends)


def test_a_byte_of_another_encoding_in_a_cr_only_file_is_named_on_its_line(tmp_path):
    """Before: 'µ' of a Mac OS Roman units line (byte 0xB5; Apple's Mac OS Roman table
    (m)) under CR-only line ends was named "on line 1", the header's line."""
    frame, _ = _records()
    lines = frame.to_csv(index=False, lineterminator="\r").split("\r", 1)
    path = tmp_path / "t.csv"
    path.write_bytes((lines[0] + "\r-,\u00b5mol m-2 s-1,W m-2,C,kPa,m s-1\r" + lines[1])
                     .encode("mac_roman"))
    with pytest.raises(InputFileError, match=r"not utf-8 text \(byte 0xb5 on line 2\)"):
        _read(path, rows_after_header=1)


@pytest.mark.parametrize("line, offset", [
    # unread before layouts36: the reader took the site's clock (ISO 8601 offsets, and
    # "ahead of UTC" east of Greenwich (m))
    ("Logger time = UTC + 2 h", 2.0), ("Recorded in UTC+2", 2.0), ("Time basis: UTC", 0.0),
    ("Logger runs on UTC", 0.0), ("Logger set to UTC+3", 3.0),
    ("UTC offset of the stamps: +2 h", 2.0), ("Stamps are 2 h ahead of UTC", 2.0),
    # still none: the clock's source only, a schedule, a count with no direction
    ("Logger clock synchronised to UTC", None), ("Logger set to record every 30 min", None),
    ("Logger runs on battery", None), ("Times are 2 h from UTC", None),
    ("Logger 3 h ahead of schedule", None),
    # review47: a clock's drift, not its zone (every zone's offset is whole quarter hours,
    # IANA tz (m)); read as UTC-00:05 before, and an honest file refused
    ("Clock drift corrected; the logger was 5 min behind GMT until March", None),
    ("Logger time 3 min ahead of UTC was corrected on 2020-05-01", None),
    ("Logger clock is 5 min ahead of UTC", None), ("Stamps are 5 h behind GMT", -5.0),
])
def test_clocks_phrased_otherwise_are_read(line, offset):
    assert stated_offset(line) == offset


def test_cr_cr_lf_line_ends_under_a_units_line_name_the_blank_lines(tmp_path):
    """Before: "if the file has 2 lines (units, processing) under the header", where one
    of the two is the blank line that CR CR LF (a CR LF file converted again) makes;
    the fix it gives reads the file record for record."""
    frame, ends = _records()
    lines = frame.to_csv(index=False, lineterminator="\r\r\n").split("\r\r\n", 1)
    path = tmp_path / "t.csv"
    path.write_bytes((lines[0] + "\r\r\n" + UNITS_LINE + "\r\r\n" + lines[1]).encode())
    with pytest.raises(TimestampError, match=r"2 lines \(units, processing or blank lines\) "
                                             r"under the header, set \[input\] "
                                             r"rows_after_header = 2"):
        _read(path, rows_after_header=1)
    read, _ = _read(path, rows_after_header=2)
    _assert_records(read, frame, ends)


@pytest.mark.parametrize("extra", [None, "__MACOSX/._t.csv", "data/.DS_Store", "Thumbs.db"])
def test_a_zip_of_one_table_is_read_as_the_table(tmp_path, extra):
    """Before: refused ("unpack it"), while a gzip file of the same table was read; a zip
    made on macOS holds each file's resource fork under __MACOSX/ beside it (Apple's
    AppleDouble format (m)), which holds no records. The archive is read through the
    standard library's zipfile (PKWARE APPNOTE (m)). A zip of a folder takes along the
    files a desktop writes into it, Finder's .DS_Store and Explorer's Thumbs.db (m),
    which hold no records either (review47: refused as a second file before)."""
    import zipfile

    frame, ends = _records()
    path = tmp_path / "t.zip"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("t.csv", frame.to_csv(index=False))
        if extra:
            archive.writestr(extra, b"\x00\x05\x16\x07\x00\x02\x00\x00Mac OS X")
    read, _ = _read(path)
    _assert_records(read, frame, ends)
    with zipfile.ZipFile(path, "a") as archive:          # a second table: still refused
        archive.writestr("t2.csv", frame.to_csv(index=False))
    with pytest.raises(InputFileError, match=r"zip archive holding 2 file\(s\) \('t.csv', "
                                             r"'t2.csv'\).*unpack it"):
        _read(path)
