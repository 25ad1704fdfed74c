"""Logger layouts of review round sixteen: mishaps whose refusal named the wrong cause or
whose records were read at the wrong times.

Outside facts, each named beside its check: the Gregorian calendar (12 months; a day of
the month above 12 is no month), Python's ``datetime.strptime`` (``%I`` is the hour of a
12-hour clock, AM/PM only through ``%p``: Python documentation of ``time.strftime``,
note 1), ISO 8601 (a UTC offset follows a time of day: ``+hh:mm``; a day ends at 24:00,
which is 00:00 of the next day (m)).
"""

import re
from datetime import datetime, timedelta

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import (
    DuplicateTimestampError,
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
)
from fluxpart.io import read_table
from fluxpart.stamp_sequence import check_isolated_stretch, infer_interval
from fluxpart.timestamps import parse_stamps

MAPPING = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
           "ustar": "u_fric"}


def _records(starts, seed=1):
    """Invented tower records at interval starts `starts`, file columns of MAPPING."""
    rng = np.random.default_rng(seed)
    hour = starts.hour + starts.minute / 60
    daylight = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    n = len(starts)
    return pd.DataFrame({
        "co2_flux": np.round(3 - 15 * daylight + rng.normal(0, 1.5, n), 3),
        "sw_down": np.round(800 * daylight, 1),
        "t_air": np.round(12 + 8 * daylight + rng.normal(0, 0.3, n), 2),
        "vpd_air": np.round(2 + 14 * daylight, 2),
        "u_fric": np.round(rng.uniform(0.05, 0.8, n), 3),
    }, index=starts)


def _write(path, records, stamps):
    out = records.copy()
    out.insert(0, "stamp", list(stamps))
    out.to_csv(path, index=False)
    return path


def _read(paths, **kwargs):
    options = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
               "time_marks": "end"}
    options.update(kwargs)
    return read_table(paths, **options)


def _parse(text, time_format):
    series = pd.Series(text)
    return parse_stamps(series, time_format, time_columns=("stamp",), source="t.dat",
                        lines=np.arange(2, len(series) + 2)).stamps


def test_twelve_hour_field_without_am_pm_is_refused_as_a_setting():
    """%I without %p: strptime reads "01:00" as 01:00 for 1 AM and 1 PM alike (Python
    documentation of ``time.strftime``, note 1), so every afternoon record took a morning
    stamp; it was refused as "stamp occurs 2 times with different values" at the first
    afternoon record, naming no setting."""
    stamps = ["2021-01-01 12:30", "2021-01-01 01:00", "2021-01-01 01:00"]
    with pytest.raises(TimestampError, match=r'time_format = "%Y-%m-%d %I:%M" cannot be '
                       r'used: %I is the hour of a 12-hour clock, which needs %p'):
        _parse(stamps, "%Y-%m-%d %I:%M")
    # the formats it points to read 12-hour stamps with AM/PM and 24-hour ones
    assert list(_parse(["2021-01-01 01:00 PM"], "%Y-%m-%d %I:%M %p")) == [
        pd.Timestamp(2021, 1, 1, 13)]
    assert list(_parse(["2021-01-01 13:00"], "%Y-%m-%d %H:%M")) == [
        pd.Timestamp(2021, 1, 1, 13)]


def test_month_first_dates_under_a_day_first_format_name_the_exchange():
    """Month-first stamps (01/13/2021) under "%d/%m/%Y": the first twelve days of each
    month parse as wrong dates and the 13th fails, as no year has a 13th month (Gregorian
    calendar). The error named only the failing stamp; now it names the exchanged
    format, which reads every stamp at its true date."""
    truth = pd.date_range("2021-01-01 00:30", "2021-02-28 00:00", freq="30min")
    text = list(truth.strftime("%m/%d/%Y %H:%M"))
    with pytest.raises(TimestampError, match=re.escape(
            'the day and the month are exchanged (the stamps that parse up to there were '
            'read as wrong dates): write time_format = "%m/%d/%Y %H:%M"')):
        _parse(text, "%d/%m/%Y %H:%M")
    assert list(_parse(text, "%m/%d/%Y %H:%M")) == list(truth)


def test_day_first_dates_with_one_bad_stamp_get_no_exchange_hint():
    """A day-first file with one damaged stamp is not told to exchange day and month."""
    text = ["13/01/2021 00:30", "13/01/2021 01:00", "13/13/2021 01:30"]
    with pytest.raises(TimestampError) as caught:
        _parse(text, "%d/%m/%Y %H:%M")
    assert "exchanged" not in str(caught.value)


def test_one_damaged_stamp_that_reads_exchanged_gets_no_exchange_hint():
    """Behaviour check (review round eighteen): a year of year-first stamps with one
    damaged month ("2021-13-01", which reads as 13 January with day and month exchanged)
    was told to write time_format = "%Y-%d-%m %H:%M", a format under which every stamp
    after the 12th of a month fails (Gregorian calendar: no month 13). The stamps that
    parse read only as they are, so the hint is left out."""
    stamps = pd.date_range("2021-01-01 00:30", "2021-03-01 00:00", freq="30min")
    text = list(stamps.strftime("%Y-%m-%d %H:%M"))
    text[1000] = "2021-13-01 01:00"
    with pytest.raises(TimestampError) as caught:
        _parse(text, "%Y-%m-%d %H:%M")
    message = str(caught.value)
    assert "'2021-13-01 01:00'" in message and "line 1002" in message
    assert "exchanged" not in message


@pytest.mark.parametrize("cell", ["-9999", "", " ", "0"])
def test_a_record_without_a_stamp_is_not_called_a_utc_offset(cell):
    """A missing code or an empty cell in the time column: "-9999" ends like an ISO 8601
    offset ("-hhmm"), and the hint had been "the stamp ends in a UTC offset: add %z"; an
    offset follows a time of day (ISO 8601 (m)), which this cell lacks."""
    text = ["2021-06-01 00:30", cell, "2021-06-01 01:30"]
    with pytest.raises(TimestampError, match=r"line 3 .*a record without a date and time "
                       r"\(an empty stamp or a missing code\)") as caught:
        _parse(text, "%Y-%m-%d %H:%M")
    assert "UTC offset" not in str(caught.value)


def test_stamps_with_offsets_still_get_the_offset_hint():
    """The offset hint stays for stamps that carry one."""
    with pytest.raises(TimestampError, match="ends in a UTC offset: add %z"):
        _parse(["2021-06-01 00:30+01:00", "2021-06-01 01:00+01:00"], "%Y-%m-%d %H:%M")


@pytest.mark.parametrize("lag", [(35, 45), (-40, 40)])
def test_seconds_scattered_beyond_the_jitter_are_named(tmp_path, lag):
    """Stamps written when each record is saved, 35-45 s after its interval ends (or
    scattered by up to 40 s): refused as "29.9333 minutes apart, not a whole multiple" or
    as "the most common spacing is 30.0833 minutes: average the file" (the file is
    30-minute records: averaging is the wrong fix). Now the seconds are named with a
    stamp, its line and the fix; the fixed file reads to the true starts."""
    starts = pd.date_range("2021-06-01 00:00", periods=480, freq="30min")
    rng = np.random.default_rng(3)
    seconds = pd.to_timedelta(rng.integers(lag[0], lag[1] + 1, len(starts)), unit="s")
    ends = starts + pd.Timedelta(minutes=30)
    records = _records(starts)
    path = _write(tmp_path / "lag.csv", records, (ends + seconds).strftime("%Y-%m-%d %H:%M:%S"))
    with pytest.raises(SpacingError, match=r"30-minute records carry seconds that vary from "
                       r"record to record \(2021-06-01 .* at line \d+ of .*lag.csv.*Write each "
                       r"stamp as the whole minute"):
        _read(path, time_format="%Y-%m-%d %H:%M:%S")
    fixed = _write(tmp_path / "fixed.csv", records, ends.strftime("%Y-%m-%d %H:%M:%S"))
    frame, _ = _read(fixed, time_format="%Y-%m-%d %H:%M:%S")
    assert list(frame.index) == list(starts)


def test_ten_minute_records_still_named_as_such():
    """Records of another interval keep their message (no seconds to blame)."""
    stamps = pd.date_range("2021-06-01", periods=100, freq="10min")
    with pytest.raises(SpacingError, match="most common spacing between stamps is 10 minutes"):
        infer_interval(stamps)


def test_midnight_dated_with_the_day_it_ends_is_not_sorted(tmp_path):
    """A logger that dates the record ending at midnight with the day that ends
    ("2021-06-01 00:00" after "2021-06-01 23:30") was told to "sort a copy of the file by
    time", which puts each such record 24 h early without a word. Midnight ends the day:
    it is 24:00 of that day or 00:00 of the next (ISO 8601 (m)); both spellings the error
    now names read every record at its true time."""
    starts = pd.date_range("2021-06-01 00:00", periods=144, freq="30min")
    ends = starts + pd.Timedelta(minutes=30)
    records = _records(starts)
    wrong = [(e - timedelta(days=1) if e.hour == 0 and e.minute == 0 else e)
             .strftime("%Y-%m-%d %H:%M") for e in ends]
    path = _write(tmp_path / "midnight.csv", records, wrong)
    with pytest.raises(NonMonotonicTimestampError, match=r"line 49 .*dated with the day it "
                       r"ends.*24:00 of that day or as 00:00 of the next day") as caught:
        _read(path)
    assert "sort a copy" not in str(caught.value)
    hour_24 = [(e - timedelta(days=1)).strftime("%Y-%m-%d 24:00")
               if e.hour == 0 and e.minute == 0 else e.strftime("%Y-%m-%d %H:%M") for e in ends]
    for name, text in (("h24.csv", hour_24), ("next.csv", ends.strftime("%Y-%m-%d %H:%M"))):
        frame, _ = _read(_write(tmp_path / name, records, text))
        assert list(frame.index) == list(starts)
        np.testing.assert_array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())


def test_rows_out_of_order_keep_the_sort_hint(tmp_path):
    """Two records exchanged (not at midnight) are still told to sort."""
    starts = pd.date_range("2021-06-01 00:00", periods=96, freq="30min")
    text = list((starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"))
    text[10], text[11] = text[11], text[10]
    path = _write(tmp_path / "swap.csv", _records(starts), text)
    with pytest.raises(NonMonotonicTimestampError, match="sort a copy of the file by time"):
        _read(path)


def _year(seed=1):
    starts = pd.date_range("2021-01-01 00:00", "2021-12-31 23:30", freq="30min")
    return starts, _records(starts, seed)


@pytest.mark.parametrize("own_file", [True, False])
def test_clock_reset_to_a_default_date_across_files_is_refused(tmp_path, own_file):
    """Three days a logger stamped from 2000-01-01 after its clock was reset, in a file of
    their own (or at the start of its file): files are read in time order, so the record
    ran from 2000 to 2021 with 21 inserted empty years (a warning "95% of stamps
    absent"), and `run` then stopped on "no 15-day window" for the year 2000. Now refused
    at the reader, naming the file, the lines and the stamps."""
    starts, records = _year()
    ends = starts + pd.Timedelta(minutes=30)
    reset = (ends > "2021-08-10") & (ends <= "2021-08-13")
    text = ends.strftime("%Y-%m-%d %H:%M").to_numpy().copy()
    text[reset] = (pd.Timestamp("2000-01-01") + (ends[reset] - pd.Timestamp("2021-08-10"))
                   ).strftime("%Y-%m-%d %H:%M")
    if own_file:
        before, after = ends <= "2021-08-10", ends > "2021-08-13"
        paths = [_write(tmp_path / "a.csv", records[before], text[before]),
                 _write(tmp_path / "b.csv", records[reset], text[reset]),
                 _write(tmp_path / "c.csv", records[after], text[after])]
        where = r"the 144 record\(s\) of lines 2 to 145 of '.*b\.csv'"
    else:
        order = np.concatenate([np.flatnonzero(reset), np.flatnonzero(~reset)])
        paths = _write(tmp_path / "one.csv", records.iloc[order], text[order])
        where = r"the 144 record\(s\) of lines 2 to 145 of '.*one\.csv'"
    with pytest.raises(TimestampError, match=where + r" \(2000-01-01 00:30 \.\. 2000-01-04 "
                       r"00:00\) lie \d+ days from the rest of the record: a logger clock "
                       "reset"):
        _read(paths)


def test_two_years_a_year_apart_still_read(tmp_path):
    """A record of 2019 and 2021 with 2020 absent (a tower off for a year) is read as
    before, the absent year inserted as missing."""
    starts, records = _year()
    earlier = starts - pd.DateOffset(years=2)
    paths = [_write(tmp_path / "a.csv", records, (earlier + pd.Timedelta(minutes=30))
                    .strftime("%Y-%m-%d %H:%M")),
             _write(tmp_path / "b.csv", records, (starts + pd.Timedelta(minutes=30))
                    .strftime("%Y-%m-%d %H:%M"))]
    frame, report = _read(paths)
    assert frame.index[0] == pd.Timestamp("2019-01-01") and frame.index[-1] == starts[-1]
    assert np.isnan(frame.loc["2020", "nee"]).all()
    np.testing.assert_array_equal(frame.loc["2021", "nee"].to_numpy(),
                                  records["co2_flux"].to_numpy())


def test_isolated_stretch_rule_at_its_limits():
    """A month-long stretch more than a year away is refused; 32 days or a gap of a
    year are not."""
    def stamps(first_days, gap_days):
        head = pd.date_range(datetime(2010, 3, 1), periods=first_days * 48, freq="30min")
        tail = pd.date_range(head[-1] + pd.Timedelta(days=gap_days), periods=48 * 400,
                             freq="30min")
        return head.append(tail)
    with pytest.raises(TimestampError):
        check_isolated_stretch(stamps(30, 400))
    check_isolated_stretch(stamps(33, 400))
    check_isolated_stretch(stamps(3, 366))


@pytest.mark.parametrize("change", ["added", "renamed", "moved"])
def test_header_of_a_changed_logger_program_midfile_is_named(tmp_path, change):
    """A logger program changed mid-file and wrote its new header (a column added, the
    time column renamed, a column moved) before its records: refused as "line N has 10
    fields ... two records run together?" or "has stamp 'stamp', which does not match
    time_format", naming no cause; the exact header repeated was named since round six.
    Now named as a header line; the fix it gave (split there, list the parts) reads
    every record (RFC 4180 §2: the first line of a CSV file may be a header of names (m);
    a part holds one). Since layouts54 the file is read so itself, as the two parts
    would be; a header without the time column is still refused with that fix."""
    starts = pd.date_range("2021-06-01 00:00", periods=192, freq="30min")
    records = _records(starts)
    stamps = list((starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"))
    first = _write(tmp_path / "part1.csv", records.iloc[:100], stamps[:100])
    later = records.iloc[100:].copy()
    column = "stamp"
    if change == "added":
        later["battery_v"] = 12.6
    elif change == "renamed":
        column = "stamp_end"
    else:
        later = later[["sw_down", "co2_flux", "t_air", "vpd_air", "u_fric"]]
    second = tmp_path / "part2.csv"
    out = later.copy()
    out.insert(0, column, stamps[100:])
    out.to_csv(second, index=False)
    joined = tmp_path / "joined.csv"
    joined.write_text(first.read_text() + second.read_text())
    if change == "renamed":
        # the parts need a time column of one name
        with pytest.raises(InputFileError, match=r"joined\.csv': line 102 is a header line "
                           r"with other names or another order than the header of line 1.*"
                           r"split the file there and list the parts in \[input\] path"):
            _read(joined)
        return
    frame, _ = _read([first, second])
    pd.testing.assert_frame_equal(_read(joined)[0], frame)
    assert list(frame.index) == list(starts)
    np.testing.assert_array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())


def test_records_with_text_cells_are_not_a_header(tmp_path):
    """A line holding one or two header names among numbers is no header line."""
    starts = pd.date_range("2021-06-01 00:00", periods=96, freq="30min")
    records = _records(starts)
    records["note"] = "ok"
    records.iloc[50, records.columns.get_loc("note")] = "u_fric co2_flux"
    path = _write(tmp_path / "notes.csv", records,
                  (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"))
    frame, _ = _read(path)
    assert len(frame) == 96


def test_flux_and_met_logger_files_of_one_period_are_joined(tmp_path):
    """A tower with two loggers: the flux file (NEE, u*, its flag) and the
    meteorological file (Rg, air temperature, VPD) of the same half-hours. Refused before,
    with the fix "add the column to 'flux.csv' (empty cells where there is no value)",
    which would have read a file of empty drivers over the other's values. Now joined
    by stamp: the same frame as one file of every column, with a warning naming the
    join; the met logger's outage is a gap of the drivers only."""
    starts = pd.date_range("2021-06-01 00:00", periods=480, freq="30min")
    records = _records(starts)
    records["qc"] = np.where(np.arange(480) % 7 == 0, 2, 0)
    stamps = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    columns = dict(MAPPING, nee_flag="qc")
    whole, _ = _read(_write(tmp_path / "whole.csv", records, stamps), columns=columns)
    flux = _write(tmp_path / "flux.csv", records[["co2_flux", "u_fric", "qc"]], stamps)
    outage = np.arange(480) >= 400                       # the met logger stops a day early
    met = _write(tmp_path / "met.csv", records.loc[~outage, ["sw_down", "t_air", "vpd_air"]],
                 stamps[~outage])
    frame, report = _read([flux, met], columns=columns)
    expected = whole.copy()
    expected.loc[expected.index[outage], ["rg", "tair", "vpd"]] = np.nan
    pd.testing.assert_frame_equal(frame, expected)
    assert any("files of one period holding different columns" in w and "joined by stamp" in w
               for w in report.warnings)
    assert not any("complete each other" in w for w in report.warnings)   # said once
    assert not report.absent_columns                # no column read as missing for a file


def test_a_required_column_absent_for_a_period_is_still_refused(tmp_path):
    """Files of different periods (no shared stamps), the later one without Rg: refused
    as before (a sensor's column absent for half the record is not a join)."""
    starts = pd.date_range("2021-06-01 00:00", periods=480, freq="30min")
    records = _records(starts)
    stamps = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    a = _write(tmp_path / "a.csv", records.iloc[:240], stamps[:240])
    b = _write(tmp_path / "b.csv", records.iloc[240:].drop(columns="sw_down"), stamps[240:])
    with pytest.raises(MissingColumnError, match=r"rg = \"sw_down\": the column is in .*a\.csv"
                       r"' but not in .*b\.csv'"):
        _read([a, b])


@pytest.mark.parametrize(("last", "dropped"), [("-2.34", True), ("-2.", True), ("-2", True),
                                             ("-2.345", False)])
def test_last_value_cut_without_a_line_end_is_dropped(tmp_path, last, dropped):
    """A logger stopped mid-write after the last delimiter: every field is there, the last
    one cut ('-2.345' written as '-2.34' or '-2'), and the file ends without a line end.
    Read before as NEE -2.34 or -2, silently. The column's values carry 3 decimals
    throughout (a logger writes each column with fixed decimals), so a shorter last
    value ending the file is dropped with a warning; a whole last line is kept."""
    starts = pd.date_range("2021-06-01 00:00", periods=96, freq="30min")
    records = _records(starts)[["sw_down", "t_air", "vpd_air", "u_fric", "co2_flux"]]
    records.iloc[-1, -1] = -2.345
    out = records.copy()
    out.insert(0, "stamp", (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"))
    text = out.to_csv(index=False, float_format="%.3f").rstrip("\n")
    assert text.endswith(",-2.345")
    path = tmp_path / "cut.csv"
    path.write_text(text[:-len("-2.345")] + last)
    frame, report = _read(path, interval_minutes=30)
    named = [w for w in report.warnings if "ends without a line end" in w]
    if dropped:
        assert len(named) == 1 and len(frame) == 95
        np.testing.assert_array_equal(frame["nee"].to_numpy(),
                                      records["co2_flux"].to_numpy()[:-1])
    else:
        assert not named and len(frame) == 96 and frame["nee"].iloc[-1] == -2.345


@pytest.mark.parametrize(("time_format", "full"), [("%j %H%M", "%Y %j %H%M"),
                                                  ("%H:%M", "%Y-%m-%d %H:%M"),
                                                  ("%d.%m. %H:%M", "%d.%m.%Y %H:%M")])
def test_a_format_without_a_year_is_refused(time_format, full):
    """Day of year and time without a year column (the year only in the file name), or
    the time of day alone in daily files: strptime fills the absent year with 1900
    (Python documentation of ``datetime.strptime``: "1900-01-01T00:00:00.000" supplies
    the fields a format lacks (m)), so a 2021 file was read, silently, as the year 1900 (daily
    files of times alone were refused as a midnight dated with the day it ends)."""
    truth = pd.date_range("2021-03-01 00:30", periods=4, freq="30min")
    with pytest.raises(TimestampError, match=re.escape(
            f'time_format = "{time_format}" cannot be used: it has no year (%Y or %y), so '
            'every stamp would be read in the year 1900')):
        _parse(list(truth.strftime(time_format)), time_format)
    assert list(_parse(list(truth.strftime(full)), full)) == list(truth)


def test_day_of_year_counted_from_zero_is_named():
    """Day of year 000 (a logger counting from 0): %j counts from 001 (ISO 8601 ordinal
    dates: 1 January is day 001 (m)). Refused before naming only the stamp; every other
    day had parsed a day early."""
    text = ["2021 000 0030", "2021 000 0100", "2021 001 0000"]
    with pytest.raises(TimestampError, match=r"its day of year is 0: %j counts from 001"):
        _parse(text, "%Y %j %H%M")


def test_month_names_of_another_language_are_named():
    """Spanish 'Dic' and Polish 'Sty' (January (m)) under %b: Python's strptime reads the
    locale's month names, English in the C locale fluxpart runs under (m); a language
    outside :mod:`fluxpart.month_words` ('Sty' is no month of its tables) is named with
    the numeric fix (German 'Mär' is read since layouts44, Italian 'Gen', this test's
    word before, since layouts52)."""
    text = ["31.Dic.2020 23:30", "01.Sty.2021 00:00"]
    with pytest.raises(TimestampError, match=r"'Sty' is no English month abbreviation.*%m"):
        _parse(text, "%d.%b.%Y %H:%M")


def test_clock_set_back_an_hour_in_july_is_named(tmp_path):
    """A logger switched from local standard time to UTC (UTC+1 site) on 1 July: the hour
    before the switch repeats with other values. The daylight-saving hint is given only in
    the months of clock changes, so this got "keep one of them in a copy of the file",
    which would lose an hour and leave every later record an hour off."""
    starts = pd.date_range("2021-06-29 00:00", periods=192, freq="30min")
    ends = starts + pd.Timedelta(minutes=30)
    stamps = ends.where(ends <= "2021-07-01 00:00", ends - pd.Timedelta(hours=1))
    path = _write(tmp_path / "utc.csv", _records(starts), stamps.strftime("%Y-%m-%d %H:%M"))
    with pytest.raises(DuplicateTimestampError, match=r"the stamps of up to an hour repeat "
                       r"there, as where a clock is set back by an hour"):
        _read(path)


def test_units_line_written_again_midfile_is_named(tmp_path):
    """A logger that writes its units line again after a restart, without the header:
    refused before as "line N has stamp 'yyyymmddHHMM', which does not match
    time_format", naming no cause. An empty units line (",,,,") repeated is a blank line,
    read as before."""
    starts = pd.date_range("2021-06-01 00:00", periods=96, freq="30min")
    records = _records(starts)
    stamps = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    body = _write(tmp_path / "plain.csv", records, stamps).read_text().splitlines()
    for units, refused in (("yyyy-mm-dd HH:MM,umol m-2 s-1,W m-2,degC,hPa,m s-1", True),
                           (",,,,,", False)):
        lines = [body[0], units] + body[1:50] + [units] + body[50:]
        path = tmp_path / "units.csv"
        path.write_text("\n".join(lines) + "\n")
        if refused:
            with pytest.raises(InputFileError, match=r"line 52 repeats line 2, a line of "
                               r"\[input\] rows_after_header under the header"):
                _read(path, rows_after_header=1)
        else:
            frame, _ = _read(path, rows_after_header=1)
            assert list(frame.index) == list(starts)


@pytest.mark.parametrize("dash", ["\u2013", "\u2012", "\u2010"])
def test_a_dash_for_a_minus_sign_is_named(tmp_path, dash):
    """'–7.46' with an en dash (U+2013), figure dash (U+2012) or hyphen (U+2010): refused
    before with the hint "if '–7.46' marks missing data, add it to [input] missing",
    which would blank every negative value. A dash is punctuation, not a sign (Unicode
    Standard, General Punctuation: U+2212 MINUS SIGN is the sign (m)), so the cell is
    named with its code point and the fix."""
    starts = pd.date_range("2021-01-01 00:00", periods=96, freq="30min")
    records = _records(starts)
    records["t_air"] = records["t_air"] - 15.0
    out = records.copy()
    out.insert(0, "stamp", (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"))
    text = out.to_csv(index=False).replace(",-", "," + dash)
    path = tmp_path / "dash.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputFileError, match=rf"begins with the dash U\+{ord(dash):04X}, not a "
                       r"minus sign.*replace it with \"-\"") as caught:
        _read(path)
    assert "add it to [input] missing" not in str(caught.value)


def _year_files(tmp_path, change, split="2021-07-01"):
    """The example year as two files, `change` applied to the second's text frame."""
    from fluxpart.demo import write_example
    config = write_example(tmp_path)
    data = pd.read_csv(config.with_suffix(".csv"), dtype=str, keep_default_na=False)
    later = data["stamp_end"] > split.replace("-", "") + "0000"
    first, second = data[~later], data[later].copy()
    change(second)
    config.with_suffix(".csv").unlink()
    first.to_csv(tmp_path / "part_a.csv", index=False)
    second.to_csv(tmp_path / "part_b.csv", index=False)
    config.write_text(config.read_text().replace('path = "quillmoor_grassland.csv"',
                                                 'path = "part_*.csv"'))
    return config


def _kilowatts(frame):
    present = frame["solar_down"] != "-9999"
    frame.loc[present, "solar_down"] = (frame.loc[present, "solar_down"].astype(float)
                                        / 1000).map(lambda v: f"{v:.4f}")


def test_a_file_in_kilowatts_among_files_in_watts_is_refused(tmp_path, capsys):
    """The example year in two files, the second's Rg in kW m-2 (an export changed at
    midyear; 1 kW = 1000 W, SI). The months were warned about, but `run` went on: annual
    NEE -415.8 for -241.4 g C m-2. That file alone would be refused as a one-file record,
    so it is refused, named; listed in accept_units it is a warning."""
    from fluxpart.cli import main
    config = _year_files(tmp_path, _kilowatts)
    assert main(["run", str(config), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and re.match(r"error: the records of input file '.*part_b\.csv' alone "
                                      r"are refused: column 'solar_down' \(rg.*kW m-2.*while "
                                      r"those of the other 1 file\(s\) are not", err[0])
    assert not (tmp_path / "out").exists()
    config.write_text(config.read_text().replace('missing = [-9999]',
                                                 'missing = [-9999]\naccept_units = ["rg"]'))
    from fluxpart.io import read_input, read_site_config
    _, report = read_input(read_site_config(config))
    assert any("part_b.csv" in w and "kept as declared" in w for w in report.warnings)


def test_one_month_in_kilowatts_within_a_file_still_only_warns(tmp_path):
    """A month in kW m-2 inside one file: named among the warnings as before, not refused
    (the files are not where it changed)."""
    def june(frame):
        rows = (frame["stamp_end"] > "202108010000") & (frame["stamp_end"] <= "202109010000")
        sub = frame[rows].copy()
        _kilowatts(sub)
        frame.loc[rows, "solar_down"] = sub["solar_down"]
    config = _year_files(tmp_path, june)
    from fluxpart.io import read_input, read_site_config
    _, report = read_input(read_site_config(config))
    assert any("may have changed within the record" in w and "2021-08" in w
               for w in report.warnings)


def test_met_file_of_another_interval_beside_a_flux_file_is_named(tmp_path):
    """A meteorological logger writing every 10 minutes beside a 30-minute flux file: the
    error had been "add the column to 'met.csv' (empty cells where there is no value)";
    now it names the other stamps and that the join needs one interval."""
    starts = pd.date_range("2021-06-01 00:00", periods=480, freq="30min")
    records = _records(starts)
    stamps = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    flux = _write(tmp_path / "flux.csv", records[["co2_flux", "u_fric"]], stamps)
    fine = pd.date_range(starts[0], periods=480 * 3, freq="10min")
    met = _write(tmp_path / "met.csv", _records(fine)[["sw_down", "t_air", "vpd_air"]],
                 (fine + pd.Timedelta(minutes=10)).strftime("%Y-%m-%d %H:%M"))
    # since layouts17 the join names both files' intervals ("... met.csv' hold them every
    # 10 minutes"), as for an hourly met file beside half-hourly flux files
    with pytest.raises(MissingColumnError, match=r"which covers the same period with (stamps "
                       r"of its own \(every 10 minutes from .*met\.csv'\)|records every 30 "
                       r"minutes in .*flux\.csv', where .*met\.csv' hold them every 10 "
                       r"minutes).*needs the same record interval") as caught:
        _read([flux, met])
    assert "empty cells" not in str(caught.value)


def test_a_file_filling_a_gap_without_an_optional_column_still_reads(tmp_path):
    """A second download filling a month-long gap of the main file, without the soil
    probe's column: read as before (its records' tsoil missing, warned), not taken for a
    logger of another interval."""
    starts = pd.date_range("2021-06-01 00:00", periods=48 * 90, freq="30min")
    records = _records(starts)
    records["t_soil"] = np.round(records["t_air"] - 2.0, 2)
    stamps = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    gap = (starts >= "2021-07-01") & (starts < "2021-08-01")
    main = _write(tmp_path / "main.csv", records[~gap], stamps[~gap])
    patch = _write(tmp_path / "patch.csv", records[gap].drop(columns="t_soil"), stamps[gap])
    frame, report = _read([main, patch], columns=dict(MAPPING, tsoil="t_soil"))
    assert len(frame) == len(starts) and frame.loc[gap, "tsoil"].isna().all()
    np.testing.assert_array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())
    assert any("t_soil" in w and "read as missing" in w for w in report.warnings)


def test_one_month_file_in_kilowatts_among_monthly_files_only_warns(tmp_path):
    """Monthly files, August's Rg a thousand times too small (a pyranometer under snow
    looks alike): the month is named among the warnings, as in one file; a file shorter
    than two months is not refused on its own."""
    from fluxpart.demo import write_example
    from fluxpart.io import read_input, read_site_config
    config = write_example(tmp_path)
    data = pd.read_csv(config.with_suffix(".csv"), dtype=str, keep_default_na=False)
    config.with_suffix(".csv").unlink()
    month = data["stamp_end"].str[:6]
    for key, frame in data.groupby(month.where(month <= "202112", "202112")):
        frame = frame.copy()
        if key == "202108":
            _kilowatts(frame)
        frame.to_csv(tmp_path / f"m_{key}.csv", index=False)
    config.write_text(config.read_text().replace('path = "quillmoor_grassland.csv"',
                                                 'path = "m_*.csv"'))
    _, report = read_input(read_site_config(config))
    assert any("may have changed within the record" in w and "2021-08" in w
               for w in report.warnings)


@pytest.mark.parametrize(("stamps_format", "given", "wanted"), [
    ("%Y-%m-%d %H:%M", "%Y-%m-%d %H:%M:%S", '"%Y-%m-%d %H:%M"'),
    ("%d.%m.%Y %H:%M:%S", "%d.%m.%Y %H:%M", None)])
def test_seconds_in_only_one_of_stamp_and_format_are_named(stamps_format, given, wanted):
    """Behaviour check (review round eighteen): time_format with ":%S" for stamps without
    seconds (or the other way round) failed every stamp with no hint. strptime needs
    every directive matched and no text left over (Python documentation of
    datetime.strptime), so the format without seconds is named; it reads every stamp.
    Stamps whose seconds are all zero under a format without them are read as the
    minute they name since layouts40 (ISO 8601-1, lower order components (m))."""
    truth = pd.date_range("2021-06-01 00:30", periods=48, freq="30min")
    text = list(truth.strftime(stamps_format))
    if wanted is None:
        assert list(_parse(text, given)) == list(truth)
        return
    with pytest.raises(TimestampError, match=re.escape(f"time_format = {wanted}")):
        _parse(text, given)
    assert list(_parse(text, wanted.strip('"'))) == list(truth)
