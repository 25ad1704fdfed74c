"""Robustness of stamp parsing on layouts loggers write (fresh-eyes campaign).

Outside fact: the calendar and clock of Python's ``datetime`` (a record ending at
00:30 on day-of-year 2 of 2021 is 2021-01-02 00:30).
"""

import re
from datetime import datetime, timedelta, timezone

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import TimestampError
from fluxpart.timestamps import parse_stamps


def _parse(text, time_format, columns=("Year", "DOY", "HHMM")):
    series = pd.Series(text)
    return parse_stamps(series, time_format, time_columns=columns, source="t.dat",
                        lines=np.arange(2, len(series) + 2)).stamps


def _year_doy_hhmm(stamps, hour_24=False):
    """Year, day of year and time of day as integers, as a logger writes them."""
    rows = []
    for stamp in stamps:
        if hour_24 and stamp.hour == 0 and stamp.minute == 0:
            day = stamp - timedelta(days=1)
            rows.append(f"{day.year} {day.timetuple().tm_yday} 2400")
        else:
            rows.append(f"{stamp.year} {stamp.timetuple().tm_yday} "
                        f"{stamp.hour * 100 + stamp.minute}")
    return rows


def test_integer_hhmm_is_not_read_greedily():
    """'130' under %H%M is 01:30, not 13:00 (strptime alone reads it as 13:00)."""
    truth = [datetime(2021, 1, 2) + timedelta(minutes=30 * k) for k in range(1, 49)]
    stamps = _parse(_year_doy_hhmm(truth), "%Y %j %H%M")
    assert list(stamps) == [pd.Timestamp(t) for t in truth]


def test_integer_hhmm_with_hour_24():
    """Integer hhmm with 2400 for the end of the day: no stamp repeats, none moves."""
    truth = [datetime(2021, 1, 2) + timedelta(minutes=30 * k) for k in range(1, 97)]
    stamps = _parse(_year_doy_hhmm(truth, hour_24=True), "%Y %j %H%M")
    assert list(stamps) == [pd.Timestamp(t) for t in truth]


def test_padded_stamps_unchanged():
    """Zero-padded stamps and other formats read exactly as before."""
    truth = [datetime(2021, 3, 1) + timedelta(minutes=30 * k) for k in range(48)]
    text = [t.strftime("%d.%m.%Y %H%M") for t in truth]
    stamps = _parse(text, "%d.%m.%Y %H%M", columns=("Date", "Time"))
    assert list(stamps) == [pd.Timestamp(t) for t in truth]


def test_format_without_codes_gets_a_hint():
    """A human-style format ('YYYYMMDDhhmm') fails naming time_format and the codes to use."""
    import pytest

    from fluxpart.errors import TimestampError

    with pytest.raises(TimestampError, match=r'time_format = "YYYYMMDDhhmm".*strptime code'):
        _parse(["202101010030", "202101010100"], "YYYYMMDDhhmm", columns=("stamp",))


def test_clock_reset_not_blamed_on_sorting():
    """Rows stamped 2000-01-01 inside a 2021 file (a logger clock reset) are named as a
    jump back by days, not met with 'sort the file', which would misplace them."""
    import pytest

    from fluxpart.errors import NonMonotonicTimestampError
    from fluxpart.stamp_sequence import check_order

    stamps = pd.DatetimeIndex(["2021-04-15 03:30", "2021-04-15 04:00", "2000-01-01 00:30",
                               "2000-01-01 01:00", "2021-04-15 05:30"])
    text = pd.Series(stamps.strftime("%Y%m%d%H%M"))
    with pytest.raises(NonMonotonicTimestampError, match=r"line 4 .*jump back by 7775 days"
                                                         r".*clock reset") as caught:
        check_order(stamps, text, "t.dat", np.arange(2, 7))
    assert "sort a copy" not in str(caught.value)


def test_stamps_in_utc_with_time_zone_utc():
    """A logger kept on UTC: time_zone = "UTC" converts its stamps to the site's local
    standard time (UTC+1 here: 11:00 UTC is 12:00), as the standard library's zoneinfo
    does; a place zone whose standard offset differs stays an error."""
    from datetime import timezone

    import pytest

    from fluxpart.errors import ConfigError

    utc = [datetime(2021, 7, 1, 11, 0) + timedelta(minutes=30 * k) for k in range(4)]
    text = pd.Series([t.strftime("%Y-%m-%d %H:%M") for t in utc])
    stamps = parse_stamps(text, "%Y-%m-%d %H:%M", time_columns=("stamp",), source="t.dat",
                          lines=np.arange(2, 6), utc_offset=1.0, time_zone="UTC").stamps
    local = timezone(timedelta(hours=1))
    expected = [t.replace(tzinfo=timezone.utc).astimezone(local).replace(tzinfo=None)
                for t in utc]
    assert list(stamps) == [pd.Timestamp(t) for t in expected]
    with pytest.raises(ConfigError, match="Europe/London.*utc_offset = 0"):
        parse_stamps(text, "%Y-%m-%d %H:%M", time_columns=("stamp",), source="t.dat",
                     lines=np.arange(2, 6), utc_offset=1.0, time_zone="Europe/London")
    with pytest.raises(ConfigError, match="POSIX sign"):
        parse_stamps(text, "%Y-%m-%d %H:%M", time_columns=("stamp",), source="t.dat",
                     lines=np.arange(2, 6), utc_offset=1.0, time_zone="Etc/GMT+1")


def test_repeated_header_line_is_named():
    """Files joined end to end repeat the header: the stamp that fails is the column name."""
    import pytest

    from fluxpart.errors import TimestampError

    text = ["202101010030", "202101010100", "stamp", "202101010130"]
    with pytest.raises(TimestampError, match=r"line 4 .*header line repeats"):
        _parse(text, "%Y%m%d%H%M", columns=("stamp",))


def test_seconds_jitter_rounded_to_the_minute():
    """End stamps written one second early (00:29:59) or a few seconds off are rounded to
    the whole minute (calendar arithmetic of Python's datetime), and counted."""
    truth = [datetime(2021, 1, 1, 0, 30) + timedelta(minutes=30 * k) for k in range(48)]
    early = [t - timedelta(seconds=1) for t in truth]
    jitter = [t + timedelta(seconds=(k % 5) - 2) for k, t in enumerate(truth)]
    for stamps_in in (early, jitter):
        text = pd.Series([t.strftime("%Y-%m-%d %H:%M:%S") for t in stamps_in])
        parsed = parse_stamps(text, "%Y-%m-%d %H:%M:%S", time_columns=("stamp",),
                              source="t.dat", lines=np.arange(2, 50))
        assert list(parsed.stamps) == [pd.Timestamp(t) for t in truth]
        assert parsed.rounded_to_minute == sum(t.second != 0 for t in stamps_in)


def test_stamps_far_from_a_minute_not_rounded():
    """A stamp 20 s off is no clock jitter of a 30-minute record: left for the spacing check."""
    stamps_in = [datetime(2021, 1, 1, 0, 30, 20), datetime(2021, 1, 1, 1, 0)]
    text = pd.Series([t.strftime("%Y-%m-%d %H:%M:%S") for t in stamps_in])
    parsed = parse_stamps(text, "%Y-%m-%d %H:%M:%S", time_columns=("stamp",), source="t.dat",
                          lines=np.arange(2, 4))
    assert parsed.rounded_to_minute == 0
    assert list(parsed.stamps) == [pd.Timestamp(t) for t in stamps_in]


def _numeric_stamps(kind, start=datetime(2021, 6, 1, 0, 30), minutes=30, n=96):
    """Stamps as Unix seconds or spreadsheet day numbers, computed with Python's datetime:
    Unix time counts seconds from 1970-01-01 00:00 UTC (POSIX.1 definition of 'seconds since
    the Epoch'); spreadsheet serials count days from 1899-12-30 (ECMA-376 Part 1, 18.17.4.1,
    1900 date system, (m))."""
    stamps = [start + timedelta(minutes=minutes * k) for k in range(n)]
    if kind == "unix":
        return [str(int((s - datetime(1970, 1, 1)).total_seconds())) for s in stamps]
    return [f"{(s - datetime(1899, 12, 30)).total_seconds() / 86400:.6f}" for s in stamps]


@pytest.mark.parametrize(("kind", "minutes", "named"), [
    ("unix", 30, r"seconds since 1970-01-01 UTC.*'1622507400' is 2021-06-01 00:30 UTC"),
    ("unix", 60, r"seconds since 1970-01-01 UTC"),
    ("serial", 30, r"spreadsheet day numbers.*'44348.020833' is 2021-06-01 00:30\)"),
])
def test_numeric_clocks_are_named_with_what_to_do(kind, minutes, named):
    """Unix seconds or spreadsheet day numbers in the time column are refused naming the
    column, what they are (with the first stamp decoded) and what to do; before, the message
    only said the stamp did not match time_format (robustness leftover 5)."""
    text = _numeric_stamps(kind, minutes=minutes)
    with pytest.raises(TimestampError, match=r"\[input\] time_column 'stamp'.*" + named
                       + r".*write the column as dates and times.*time_format"):
        _parse(text, "%Y-%m-%d %H:%M", columns=("stamp",))


def test_percent_s_format_says_unix_time_is_not_read():
    """time_format = "%s" (Unix time in some strftime dialects) names the way out."""
    with pytest.raises(TimestampError, match=r'time_format = "%s" cannot be used.*Unix time'):
        _parse(_numeric_stamps("unix"), "%s", columns=("stamp",))


@pytest.mark.parametrize("time_format, repeated", [("%Y%M%d%H%M", "%M"),
                                                   ("%Y-%m-%d %H:%m", "%m"),
                                                   ("%Y%Y%m%d%H%M", "%Y")])
def test_a_format_repeating_a_field_is_one_error(time_format, repeated):
    """%M written for %m (a common typo) repeats a field: one error naming the setting and
    the field, not a traceback from the regular-expression engine (review, 0.12.0)."""
    with pytest.raises(TimestampError, match=r"time_format = .* cannot be used: it repeats "
                       + repeated + r"; each field may appear once"):
        _parse(_numeric_stamps("unix"), time_format, columns=("stamp",))


def test_ordinary_numbers_are_not_named_a_clock():
    """Integer stamps of the %Y%m%d%H%M kind that fail for another reason get no clock hint."""
    with pytest.raises(TimestampError) as caught:
        _parse(["202101010030", "202101010100", "2021010101xx"], "%Y%m%d%H%M", columns=("s",))
    assert "Unix" not in str(caught.value) and "spreadsheet" not in str(caught.value)


def test_literal_z_in_the_format_is_utc():
    """A format ending in a literal Z ("%Y-%m-%dT%H:%M:%SZ", as a logger on UTC writes
    2021-07-01T11:00:00Z) declares UTC: ISO 8601 designates UTC by Z. The stamps are
    converted to the site's local standard time like those read with %z, which the
    standard library's datetime parses the same Z with; before, they were read as local
    time, an hour off at a UTC+1 site."""
    from datetime import timezone

    utc = [datetime(2021, 7, 1, 11, 0) + timedelta(minutes=30 * k) for k in range(4)]
    text = pd.Series([t.strftime("%Y-%m-%dT%H:%M:%SZ") for t in utc])
    options = {"time_columns": ("stamp",), "source": "t.dat", "lines": np.arange(2, 6),
               "utc_offset": 1.0}
    stamps = parse_stamps(text, "%Y-%m-%dT%H:%M:%SZ", **options)
    local = timezone(timedelta(hours=1))
    expected = [datetime.strptime(t, "%Y-%m-%dT%H:%M:%S%z").astimezone(local)
                .replace(tzinfo=None) for t in text]
    assert list(stamps.stamps) == [pd.Timestamp(t) for t in expected]
    assert expected[0] == datetime(2021, 7, 1, 12, 0) and stamps.offset_converted == 4
    assert list(parse_stamps(text, "%Y-%m-%dT%H:%M:%S%z", **options).stamps) == \
        list(stamps.stamps)
    # the same file with time_zone = "UTC" (the other documented way) reads the same
    assert list(parse_stamps(text, "%Y-%m-%dT%H:%M:%SZ", **options, time_zone="UTC").stamps) \
        == list(stamps.stamps)


@pytest.mark.parametrize(("before", "lines", "wanted"), [(0, ["time", ""], 2), (1, [""], 2),
                                                         (0, ["degC"], 1)])
def test_units_and_processing_lines_hint_counts_them_all(before, lines, wanted):
    """A logger header with a units and a processing line: the hint names the number of
    lines to skip, counting those already skipped (it said rows_after_header = 1 even
    when that was set, or when two lines stood under the header)."""
    truth = [f"2021-06-01 {h:02d}:{m:02d}:00" for h in range(3) for m in (0, 30)]
    with pytest.raises(TimestampError, match=rf"rows_after_header = {wanted}$"):
        parse_stamps(pd.Series(lines + truth), "%Y-%m-%d %H:%M:%S",
                     time_columns=("logger_stamp",), source="t.dat",
                     lines=np.arange(2, len(lines) + len(truth) + 2),
                     rows_after_header=before)


@pytest.mark.parametrize(("stamps", "time_format", "said"), [
    (["1/1/2021 12:30 AM", "1/1/2021 1:00 AM"], "%m/%d/%Y %H:%M",
     'AM/PM (a 12-hour clock): write the hour as %I and add %p, time_format = '
     '"%m/%d/%Y %I:%M %p"'),
    (["01.01.21 00:30", "01.01.21 01:00"], "%d.%m.%Y %H:%M",
     'the year has two digits: write it as %y, time_format = "%d.%m.%y %H:%M"'),
])
def test_twelve_hour_clock_and_two_digit_year_are_named(stamps, time_format, said):
    """A spreadsheet's 12-hour clock or two-digit year under a 24-hour, four-digit format:
    the error names the strptime codes that read them (Python datetime.strptime: %I, %p,
    %y); it named only the format."""
    with pytest.raises(TimestampError, match=re.escape(said)):
        _parse(stamps, time_format, columns=("logger_stamp",))
    fixed = said.split("time_format = ")[1].strip('"')
    assert list(_parse(stamps, fixed, columns=("logger_stamp",))) == [
        pd.Timestamp(2021, 1, 1, 0, 30), pd.Timestamp(2021, 1, 1, 1, 0)]


def test_am_pm_with_a_24_hour_field_is_refused():
    """%p beside %H: Python's strptime applies AM/PM only to the 12-hour %I (Python
    documentation of ``time.strftime``, note 1: "the %p directive only affects the output
    hour field if the %I directive is used to parse the hour"), so "01:00 PM" would read
    as 01:00. Refused naming the setting and
    the fix, not reported as repeated stamps (review, round five)."""
    stamps = ["01/01/2021 12:30 AM", "01/01/2021 01:00 AM", "01/01/2021 01:00 PM"]
    with pytest.raises(TimestampError, match=r'time_format = "%m/%d/%Y %H:%M %p" cannot be '
                       r'used: %p \(AM/PM\) applies only to a 12-hour %I.*'
                       r'time_format = "%m/%d/%Y %I:%M %p"'):
        _parse(stamps, "%m/%d/%Y %H:%M %p", columns=("stamp",))
    fixed = _parse(stamps, "%m/%d/%Y %I:%M %p", columns=("stamp",))
    assert list(fixed) == [datetime(2021, 1, 1, 0, 30), datetime(2021, 1, 1, 1, 0),
                           datetime(2021, 1, 1, 13, 0)]


def test_midnight_written_as_the_date_alone_is_read_as_midnight():
    """R's ``as.character`` of date-times (R 4.3.0 NEWS (m): it drops a zero time of day
    element by element) and some spreadsheet exports write
    00:00 as the date alone ("2021-01-02" between "2021-01-01 23:30" and
    "2021-01-02 00:30"). Read as midnight and counted; the calendar is Python's datetime.
    A stamp with a cut time, an empty stamp, or a file of dates only stays an error."""
    truth = [datetime(2021, 1, 1, 23, 0) + timedelta(minutes=30 * k) for k in range(5)]
    text = [s.strftime("%Y-%m-%d") if s.hour == 0 and s.minute == 0
            else s.strftime("%Y-%m-%d %H:%M") for s in truth]
    assert text[2] == "2021-01-02"
    series = pd.Series(text)
    parsed = parse_stamps(series, "%Y-%m-%d %H:%M", time_columns=("stamp",), source="t.csv",
                          lines=np.arange(2, 7))
    assert list(parsed.stamps) == truth and parsed.date_only == 1
    for bad in ("", "2021-01-02 00"):
        with pytest.raises(TimestampError, match=r"line 4 of 't.dat' has stamp"):
            _parse(text[:2] + [bad] + text[3:], "%Y-%m-%d %H:%M", columns=("stamp",))
    with pytest.raises(TimestampError, match=r"5 stamp\(s\) fail to parse"):
        _parse([s.strftime("%Y-%m-%d") for s in truth], "%Y-%m-%d %H:%M", columns=("stamp",))


def test_summer_time_abbreviation_under_percent_capital_z_is_named():
    """%Z reads UTC, GMT, names of the time-zone database and the European labels (CET,
    CEST, ...: one offset each, IANA "europe" file (m); CEST read since round layouts18),
    not a summer-time abbreviation that also names another zone (BST: British Summer Time,
    Bangladesh Standard Time). The refusal names the abbreviation and the two ways out
    (review, round five); the winter stamps before it are read as UTC+0."""
    text = ["2021-03-28 00:30 GMT", "2021-03-28 02:00 BST"]
    with pytest.raises(TimestampError, match=r"line 3 .*the zone abbreviation 'BST' is not "
                       r"read .*numeric offset .*\[input\] time_zone"):
        parse_stamps(pd.Series(text), "%Y-%m-%d %H:%M %Z", time_columns=("stamp",),
                     source="t.csv", lines=np.arange(2, 4), utc_offset=0.0)
    winter = parse_stamps(pd.Series(text[:1]), "%Y-%m-%d %H:%M %Z", time_columns=("stamp",),
                          source="t.csv", lines=np.arange(2, 3), utc_offset=0.0)
    assert list(winter.stamps) == [datetime(2021, 3, 28, 0, 30)]
    # CET then CEST: 03:00 CEST is 02:00 CET (UTC+2 and UTC+1)
    both = parse_stamps(pd.Series(["2021-03-28 01:30 CET", "2021-03-28 03:00 CEST"]),
                        "%Y-%m-%d %H:%M %Z", time_columns=("stamp",), source="t.csv",
                        lines=np.arange(2, 4), utc_offset=1.0)
    assert list(both.stamps) == [datetime(2021, 3, 28, 1, 30), datetime(2021, 3, 28, 2, 0)]


def test_standard_time_labels_under_percent_capital_z_are_fixed_offsets():
    """A stamp labelled CET is standard time, UTC+1 all year, also in July; CEST names the
    summer time (the abbreviations' definitions in the IANA time-zone database (m)). As a
    zone of that database "CET" keeps summer time, so a July 12:00 CET was read as
    10:00 UTC, an hour early (review round twelve: a summer file labelled CET moved every
    record by an hour; a year's file was refused at its four spring-forward stamps).
    Outside fact for the arithmetic: Python's ``datetime`` with fixed UTC offsets."""
    stamps = [datetime(2021, 1, 15, 12, 0), datetime(2021, 3, 28, 2, 30),
              datetime(2021, 7, 1, 12, 0), datetime(2021, 10, 31, 2, 30)]
    for label, hours in (("CET", 1), ("MET", 1), ("EET", 2), ("WET", 0)):
        text = pd.Series([f"{s:%Y-%m-%d %H:%M} {label}" for s in stamps])
        parsed = parse_stamps(text, "%Y-%m-%d %H:%M %Z", time_columns=("stamp",),
                              source="t.csv", lines=np.arange(2, 6), utc_offset=1.0)
        utc = [s.replace(tzinfo=timezone(timedelta(hours=hours))).astimezone(timezone.utc)
               for s in stamps]
        assert list(parsed.stamps) == [u.replace(tzinfo=None) + timedelta(hours=1)
                                       for u in utc], label
    # a name that merely contains the letters is not a label ("Etc/GMT" is read as it is)
    utc_text = pd.Series([f"{s:%Y-%m-%d %H:%M} Etc/GMT" for s in stamps])
    parsed = parse_stamps(utc_text, "%Y-%m-%d %H:%M %Z", time_columns=("stamp",),
                          source="t.csv", lines=np.arange(2, 6), utc_offset=1.0)
    assert list(parsed.stamps) == [s + timedelta(hours=1) for s in stamps]


def test_off_grid_warning_names_time_marks_only_where_they_explain_the_offset():
    """Interval starts half an interval off the grid are stamps of another place in the
    interval (time_marks); starts one minute off (end stamps written at 00:29, 00:59) are
    not, and the warning says so instead of sending the user to time_marks. Outside fact:
    the clock arithmetic of Python's ``datetime``."""
    from fluxpart.stamp_sequence import clock_alignment_warning

    on_grid = [datetime(2021, 6, 1) + timedelta(minutes=30 * k) for k in range(96)]
    half = pd.DatetimeIndex([t + timedelta(minutes=15) for t in on_grid])
    minute = pd.DatetimeIndex([t - timedelta(minutes=1) for t in on_grid])
    assert clock_alignment_warning(pd.DatetimeIndex(on_grid), 30, "end") is None
    assert 'time_marks = "end"' in clock_alignment_warning(half, 30, "end")
    text = clock_alignment_warning(minute, 30, "end")
    assert "minute 59 of the hour" in text and "time_marks" not in text
    assert "Align the stamps" in text and "(96 of 96 records)" in text


def test_stamps_with_decimal_fractions_are_named_for_what_they_are():
    """Year, day and hhmm saved from a table of floats ('2021.0 1.0 30.0') are read as the
    whole numbers they are (refused before layouts38, "whole numbers written with a decimal
    fraction"); a decimal day of year ('2021 1.02083' = 00:30 of 1 January, 30/1440 of a
    day) is read under a format ending in %j since layouts40, and refused with what it is
    under another, judged on every failing stamp (the first decimal day, 1.00000, is
    whole). Outside fact: the calendar of Python's ``datetime``."""
    starts = [datetime(2021, 1, 1) + timedelta(minutes=30 * k) for k in range(96)]
    floats = [f"{float(t.year)} {float(t.timetuple().tm_yday)} {float(t.hour * 100 + t.minute)}"
              for t in starts]
    assert list(_parse(floats, "%Y %j %H%M")) == starts
    decimal_days = [f"{t.year} {t.timetuple().tm_yday + (t.hour * 60 + t.minute) / 1440:.5f}"
                    for t in starts]
    assert decimal_days[1] == "2021 1.02083"
    assert list(_parse(decimal_days, "%Y %j", columns=("Year", "DOY"))) == starts
    day_first = [" ".join(stamp.split()[::-1]) for stamp in decimal_days]
    with pytest.raises(TimestampError, match=r"stamps hold decimal fractions \(a decimal day"):
        _parse(day_first, "%j %Y", columns=("DOY", "Year"))


def test_stamps_saved_in_scientific_notation_are_named():
    """A spreadsheet that shows a yyyymmddhhmm column as numbers saves 202101010030 as
    '2.02101E+11' (six significant digits, Python's '%.5E'): the minutes, hours and days
    are gone. It was called "decimal fractions (a decimal day of year or hour?)"; now the
    scientific notation and the lost digits are named (review round seven)."""
    starts = [datetime(2021, 1, 1) + timedelta(minutes=30 * k) for k in range(1, 97)]
    saved = [f"{float(t.strftime('%Y%m%d%H%M')):.5E}" for t in starts]
    assert saved[0] == "2.02101E+11"
    with pytest.raises(TimestampError, match=r"numbers in scientific notation \('2\.02101E\+11'"
                                             r"\).*digits are lost"):
        _parse(saved, "%Y%m%d%H%M")
