"""Layouts of the layouts38 round: stamps counted since a reference date (spreadsheet day
numbers, Unix time) under time_format = "<unit> since <date>", and stamp fields written as
whole numbers with a decimal point ("2021.0 1.0 30.0").

Outside facts, each named beside its check: the "<unit> since <reference>" form of a time
coordinate's units (CF conventions, section 4.4 (m)); spreadsheets count days from
1899-12-30 in the 1900 date system and from 1904-01-01 in Excel's 1904 date system
(Microsoft, "Date systems in Excel" (m)); Unix time counts seconds since 1970-01-01 00:00
UTC (POSIX.1 (m)); the expected stamps are computed with Python's datetime, a general-purpose
reference. pandas writes an integer column holding a missing value as float64 ("30.0")
(pandas documentation (m)). Everything else is invented known truth: the records as written.
"""
import re
from datetime import datetime, timedelta

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE
from test_robustness_layouts37 import _assert_all

from fluxpart import footers
from fluxpart.counted_time import counted_form, counted_stamps
from fluxpart.errors import InputFileError, NonMonotonicTimestampError, TimestampError
from fluxpart.io import read_table


def _read(path, **options):
    settings = {"time_column": "stamp", "time_format": "%Y%m%d%H%M", "time_marks": "end"}
    settings.update(options)
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE, **settings)


def _write(tmp_path, stamps, frame, **columns):
    frame = frame.copy()
    frame["stamp"] = stamps
    for name, values in columns.items():
        frame.insert(0, name, values)
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    return path


@pytest.mark.parametrize("time_format, count", [
    # spreadsheet day numbers of the 1900 system, six decimals (0.09 s)
    ("days since 1899-12-30",
     lambda end: f"{(end - datetime(1899, 12, 30)) / timedelta(days=1):.6f}"),
    # Excel's 1904 date system, five decimals (0.9 s: rounded to the minute)
    ("days since 1904-01-01",
     lambda end: f"{(end - datetime(1904, 1, 1)) / timedelta(days=1):.5f}"),
    # Unix time: the stamps in UTC, the site at UTC+1
    ("seconds since 1970-01-01 00:00:00 UTC",
     lambda end: str(int((end - timedelta(hours=1) - datetime(1970, 1, 1)).total_seconds()))),
    ("milliseconds since 1970-01-01T00:00Z",
     lambda end: str(int((end - timedelta(hours=1) - datetime(1970, 1, 1))
                         / timedelta(milliseconds=1)))),
    ("hours since 2021-06-01 00:00",
     lambda end: f"{(end - datetime(2021, 6, 1)) / timedelta(hours=1):g}"),
])
def test_counted_stamps_are_read_under_their_form(tmp_path, time_format, count):
    """Refused before layouts38 ("which fluxpart does not read", or the format's 'UTC'
    taken for a clock against the site's)."""
    frame, ends = _records()
    path = _write(tmp_path, [count(end.to_pydatetime()) for end in ends], frame)
    read, _ = _read(path, time_format=time_format)
    _assert_all(read, frame, ends)


def test_counted_forms_and_their_refusals(tmp_path):
    assert counted_form("%Y-%m-%d %H:%M") is None and counted_form("ISO8601") is None
    assert counted_form("Days since 1899-12-30") == (86400.0, pd.Timestamp("1899-12-30"), None)
    assert counted_form("seconds since 1970-01-01 00:00 +0530")[2] == "+05:30"
    with pytest.raises(TimestampError, match="'2021-02-30' is no date"):
        counted_form("days since 2021-02-30")
    # UTC offsets in civil use lie from -12:00 to +14:00 (IANA time zone database (m));
    # '+25' was written into each stamp and refused as stamps not matching "%z" (review51)
    with pytest.raises(TimestampError, match="'\\+25' is no UTC offset"):
        counted_form("seconds since 1970-01-01 00:00 +25")
    # UDUNITS' 'week' is no unit of the form: was read as a strptime format (review51)
    for written in ("weeks since 2021-06-05", "days since 30.12.1899"):
        with pytest.raises(TimestampError, match="a count of time is read as"):
            counted_form(written)
    frame, ends = _records()
    serial = [f"{(e.to_pydatetime() - datetime(1899, 12, 30)) / timedelta(days=1):.6f}"
              for e in ends]
    serial[40] = "#VALUE!"
    path = _write(tmp_path, serial, frame)
    with pytest.raises(TimestampError, match=r"line 42 .* has stamp '#VALUE!', which is no "
                                             r"number of time_format = \"days since"):
        _read(path, time_format="days since 1899-12-30")
    # without the form the column is refused, now naming the setting that reads it
    serial[40] = serial[41]
    path = _write(tmp_path, serial[:40] + serial[41:] + [serial[-1]], frame)
    with pytest.raises(TimestampError, match=r'set \[input\] time_format = "days since '
                                             r'1899-12-30" to read them'):
        _read(path, time_format="%Y-%m-%d %H:%M")


def test_stamp_fields_of_whole_numbers_with_a_point_are_read(tmp_path):
    """Refused before layouts38 ("'2021.0 152.0 30.0' does not match")."""
    frame, ends = _records()
    path = _write(tmp_path, "", frame.drop(columns="stamp"),
                  hhmm=[f"{int(e.strftime('%H%M'))}.0" for e in ends],
                  doy=[f"{int(e.strftime('%j'))}.0" for e in ends],
                  yr=[f"{e.year}.0" for e in ends])
    read, report = _read(path, time_column=["yr", "doy", "hhmm"], time_format="%Y %j %H%M")
    _assert_all(read, frame, ends)
    assert report.stamp_conversions["whole_numbers"] == len(ends)
    # a format with a point of its own reads the point: hourly "%H.%M" stamps stay as
    # written (13.00 is 13:00, not 1300)
    hourly = [f"{e:%Y-%m-%d} {e.hour}.00" for e in ends[1::2]]
    path = _write(tmp_path, hourly, frame.iloc[1::2])
    read, report = _read(path, time_format="%Y-%m-%d %H.%M")
    assert read.index.equals(pd.DatetimeIndex(ends[1::2] - pd.Timedelta("1h"), name="time")
                             .as_unit(read.index.unit))
    assert "whole_numbers" not in report.stamp_conversions


def test_a_file_newest_first_in_civil_time_is_read_in_the_loggers_order(tmp_path):
    """Refused before layouts38 ("sort a copy of the file oldest first"). Civil time of
    Europe/Berlin repeats 02:00-03:00 on 31 October 2021 (IANA time zone database (m)):
    read in reverse, the file's records are the logger's order again, whose first 02:30
    is summer time. Month files newest first are named in one warning."""
    ends = pd.date_range("2021-10-28 00:30", periods=48 * 6, freq="30min")
    frame, _ = _records(len(ends))
    civil = ends.tz_localize("Etc/GMT-1").tz_convert("Europe/Berlin")
    path = _write(tmp_path, list(civil.strftime("%Y-%m-%d %H:%M")), frame)
    expected, _ = _read(path, time_format="%Y-%m-%d %H:%M", time_zone="Europe/Berlin")
    _assert_all(expected, frame, ends)
    lines = path.read_text().splitlines()
    path.write_text("\n".join(lines[:1] + lines[:0:-1]) + "\n")
    read, report = _read(path, time_format="%Y-%m-%d %H:%M", time_zone="Europe/Berlin")
    _assert_all(read, frame, ends)
    assert any("is written newest first" in w for w in report.notes)
    parts = [tmp_path / "a.csv", tmp_path / "b.csv"]
    for part, rows in zip(parts, (lines[1:100], lines[100:]), strict=True):
        part.write_text("\n".join(lines[:1] + rows[::-1]) + "\n")
    read, report = _read([str(p) for p in parts], time_format="%Y-%m-%d %H:%M",
                         time_zone="Europe/Berlin")
    _assert_all(read, frame, ends)
    assert any("2 of 2 input files ('" in w and "are written newest first" in w
               for w in report.notes)


def test_a_pair_out_of_place_in_a_newest_first_file_is_named_in_the_order_read(tmp_path):
    """A file written newest first with two neighbouring lines exchanged: refused, and the
    message says the file is read from its last line up, in which order one stamp comes
    after a later one (review51: it said only "comes after", of two lines that in the
    file stand the other way round). Invented records."""
    frame, ends = _records()
    stamps = [f"{e:%Y%m%d%H%M}" for e in ends][::-1]
    stamps[100], stamps[101] = stamps[101], stamps[100]
    path = _write(tmp_path, stamps, frame.iloc[::-1])
    with pytest.raises(NonMonotonicTimestampError,
                       match=r"is written newest first, so it is read from its last line "
                             r"up, and in that order stamps go backwards at line 102 .*"
                             r"'202106082130' comes after '202106082200'"):
        _read(path)


def test_names_in_decomposed_unicode_are_the_settings_columns(tmp_path):
    """Refused before layouts38 as look-alike characters. Unicode Standard Annex #15:
    "ä" as U+00E4 (NFC) and as "a" + U+0308 (NFD) are canonically equivalent (m); the
    decomposed names are computed with Python's unicodedata. A name that differs in
    another way (a no-break space, no canonical equivalent of a space) stays refused."""
    import unicodedata

    from fluxpart.errors import MissingColumnError
    from fluxpart.unicode_names import settings_spelling

    frame, ends = _records()
    names = {"co2": "CO2-Austausch", "sw": "Strahlung", "t_air": "Lufttemperatur",
             "vpd": "Sättigungsdefizit", "us": "Schubspannung", "stamp": "Zeitstempel"}
    decomposed = frame.rename(columns={k: unicodedata.normalize("NFD", v)
                                       for k, v in names.items()})
    path = tmp_path / "t.csv"
    decomposed.to_csv(path, index=False)
    assert unicodedata.normalize("NFD", "Sättigungsdefizit") != "Sättigungsdefizit"
    mapping = {key: names[column] for key, column in MAPPING.items()}
    read, _ = read_table(str(path), columns=mapping, units={"vpd": "kPa"}, site=SITE,
                         time_column="Zeitstempel", time_format="%Y%m%d%H%M",
                         time_marks="end")
    _assert_all(read, frame, ends)
    assert settings_spelling(["co2\u00a0net"], ["co2 net"]) == {}
    frame.rename(columns={"co2": "co2\u00a0net"}).to_csv(path, index=False)
    with pytest.raises(MissingColumnError, match="look-alike"):
        read_table(str(path), columns=MAPPING | {"nee": "co2 net"}, units={"vpd": "kPa"},
                   site=SITE, time_column="stamp", time_format="%Y%m%d%H%M",
                   time_marks="end")


@pytest.mark.parametrize("time_format, scale, other", [
    # Unix time in milliseconds (POSIX.1 counts seconds (m)) under a form of seconds: was
    # "no number", each count beyond 3000 years
    ("seconds since 1970-01-01 UTC", 1000, '"milliseconds since 1970-01-01 UTC"'),
    # Unix seconds under a form of milliseconds: was "average the file to 30 minutes"
    ("milliseconds since 1970-01-01 UTC", 1, '"seconds since 1970-01-01 UTC"'),
])
def test_counts_in_another_unit_are_named_by_the_unit(tmp_path, time_format, scale, other):
    """Counts whose median step in the format's unit gives records less than a minute or
    more than a day apart are refused naming the unit in which they are 30 minutes
    apart (review51). Expected counts computed with Python's datetime."""
    frame, ends = _records()
    unix = [int((e.to_pydatetime() - timedelta(hours=1) - datetime(1970, 1, 1))
                .total_seconds()) * scale for e in ends]
    path = _write(tmp_path, [str(count) for count in unix], frame)
    with pytest.raises(TimestampError, match="counted in .* they are 30 minutes apart: set "
                                             rf"\[input\] time_format = {other}"):
        _read(path, time_format=time_format)


def test_counted_stamps_with_a_decimal_comma(tmp_path):
    """A spreadsheet of a comma locale writes day numbers "44348,020833" (Microsoft's
    1900 date system (m)); "44,348" could group thousands and is no count."""
    frame, ends = _records()
    serial = [f"{(e.to_pydatetime() - datetime(1899, 12, 30)) / timedelta(days=1):.6f}"
              .replace(".", ",") for e in ends]
    path = tmp_path / "t.csv"
    path.write_text(frame.assign(stamp=serial).astype(str)
                    .apply(lambda c: c.str.replace(".", ",", regex=False))
                    .to_csv(index=False, sep=";"))
    read, _ = _read(path, time_format="days since 1899-12-30", delimiter=";", decimal=",")
    _assert_all(read, frame, ends)
    _, _, no_count = counted_stamps(pd.Series(["44,348", "44348,5"]), "days since 1899-12-30")
    assert list(no_count) == [True, False]


@pytest.mark.parametrize("footer, dropped", [
    # lines about the file after a blank line: "a record cut short" before layouts38
    (["", "Records written,480", "Logger program,half_hour_v3", "End of data"],
     "its last 3 lines (483 to 485: 'Records written,480', 'Logger program,half_hour_v3', "
     "'End of data') open with words after a blank line"),
    # a spreadsheet's statistics under the records: "are a summary" and refused before
    (["mean,1,2,3,4,5", "max,6,7,8,9,10"],
     "its last 2 lines (482 to 483: 'mean', 'max') have a word for a stamp, no record"),
])
def test_a_footer_of_words_or_statistics_is_dropped_and_named(tmp_path, footer, dropped):
    frame, ends = _records()
    text = frame.to_csv(index=False) + "\n".join(footer) + "\n"
    path = tmp_path / "t.csv"
    path.write_text(text)
    read, report = _read(path)
    _assert_all(read, frame, ends)
    assert any(dropped in w for w in report.notes), report.notes


def test_records_opening_with_a_site_name_are_no_footer(tmp_path):
    """Records that open with the site's name (a word) and end cut short after a blank
    line are records, not a footer about the file: refused as cut short, as before
    layouts38, not dropped (review51: they were dropped with a footer's warning)."""
    frame, ends = _records()
    frame = frame.copy()
    frame.insert(0, "site", "QM")
    lines = frame.to_csv(index=False).splitlines()
    cut = [",".join(line.split(",")[:-2]) for line in lines[-2:]]
    path = tmp_path / "t.csv"
    path.write_text("\n".join(lines[:-2] + [""] + cut) + "\n")
    with pytest.raises(InputFileError, match=r"line 481 \('QM,.*has 5 fields where the "
                                              r"header has 7; a record cut short"):
        _read(path)
    # stamps opening with a month's name (strptime's %b), the block a month after the
    # record above it: a time of day marks them as records
    text = ["stamp,co2,sw,t_air", "May 31 2021 23:30,1.0,0.0,9.0", "",
            "Jun 01 2021 00:00,1.1,0.0", "Jun 01 2021 00:30,1.2,0.0"]
    assert footers.word_footer(text, np.array([2, 4, 5]), [1, 2], 2) == []
    text[3:] = ["Records written,3", "End of data"]
    assert footers.word_footer(text, np.array([2, 4, 5]), [1, 2], 2) == [1, 2]


def test_words_without_a_blank_line_or_among_the_records_stay_refused(tmp_path):
    """A short line of words right under the records is judged as before (two such lines
    before the last: a record cut short or a footer, refused); a word stamp among the
    records is no summary under them."""
    frame, _ = _records()
    path = tmp_path / "t.csv"
    path.write_text(frame.to_csv(index=False) + "Records written,480\nEnd,of,data\nEnd\n")
    with pytest.raises(InputFileError, match="a record cut short"):
        _read(path)
    table = frame.astype(object)
    table.loc[100, "stamp"] = "mean"
    path.write_text(table.to_csv(index=False))
    with pytest.raises(TimestampError, match="'mean', which does not match"):
        _read(path)


def test_day_numbers_of_the_other_date_system_are_warned_of_by_the_year_in_the_file_name(
        tmp_path):
    """Day numbers of Excel's 1904 date system read as days since 1899-12-30 landed 1462
    days (four years and a day) early without a word (leftovers49); a year in the file
    name that only the other system's reading reaches names it, as a warning: the
    setting is the user's word and a file name weaker evidence (an export named by the
    year it was made), so the stamps are read as set (leftovers50; refused before).
    1 January 1904 is day 1462 of the 1900 system (Microsoft, "Date systems in Excel"
    (m)); the stamps are computed with Python's datetime."""
    frame, ends = _records()                       # invented records of 1-10 June 2021
    days_1904 = [f"{(e.to_pydatetime() - datetime(1904, 1, 1)) / timedelta(days=1):.6f}"
                 for e in ends]
    path = _write(tmp_path, days_1904, frame)
    named = path.rename(tmp_path / "tower_2021_june.csv")
    read, report = _read(named, time_format="days since 1899-12-30")
    said = [w for w in report.warnings if "date system" in w]
    assert len(said) == 1 and re.search(
        r"file name names 2021, but as days since 1899-12-30 the stamps run from "
        r"2017-05-3.*days since 1904-01-01 \(Excel's 1904 date system\).*silences this",
        said[0]), report.warnings
    # read as set: four years and a day early, as the setting says
    assert read.index[0] == ends[0] - pd.Timedelta(days=1462) - pd.Timedelta(minutes=30)
    read, report = _read(named, time_format="days since 1904-01-01")   # the right system
    _assert_all(read, frame, ends)
    assert not [w for w in report.warnings if "date system" in w]
    # 1900-system numbers set as 1904 would land four years late: warned the same way
    days_1900 = [f"{(e.to_pydatetime() - datetime(1899, 12, 30)) / timedelta(days=1):.6f}"
                 for e in ends]
    path = _write(tmp_path, days_1900, frame).rename(tmp_path / "site-2021.csv")
    _, report = _read(path, time_format="days since 1904-01-01")
    assert any("the 1900 date system" in w for w in report.warnings)
    # no year in the name, or the year the stamps as set reach: read as set, silent
    for name in ("tower.csv", "export-2021.csv"):
        path = path.rename(tmp_path / name)
        read, report = _read(path, time_format="days since 1899-12-30")
        _assert_all(read, frame, ends)
        assert not [w for w in report.warnings if "date system" in w]
