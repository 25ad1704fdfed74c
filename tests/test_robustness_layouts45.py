"""Layouts of the layouts45 round: refusals that named a wrong cause.

A time field of minutes since midnight was called hours and minutes written as one number
(HHMM); rows a spreadsheet sorted by their quality flag were called a logger clock reset
that sorting would misplace; summary lines at a fixed spacing among the records (a day's
means after its 48 half-hours) were refused with no cause.

A day file closed by a line stamped with the date alone was called a ring memory read from
its start, whose fix (sorting) reads that line as a midnight record.

Outside facts, each named beside its check: a day holds 1,440 minutes, so 90 minutes
after midnight is 01:30 and "90" is no hhmm clock (its minutes would be 90) (SI; common
practice); a stable sort keeps the earlier order among equal keys, so rows sorted by a
flag stay in time order within each flag value (Knuth, TAOCP vol. 3, section 5 (m));
half-hourly records make 48 a day (common practice). Everything else is invented known
truth: the records as written.
"""

import re

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records, 1-8 June 2021

from fluxpart.errors import DuplicateTimestampError, NonMonotonicTimestampError, TimestampError


def _flags(count):
    """An invented quality flag of 0 or 1 for each record."""
    return (np.random.default_rng(46).random(count) < 0.3).astype(int)


def _lines(stamps, values, head="stamp"):
    return [",".join([head] + NAMES)] + [
        ",".join(list(stamp) + [f"{v:g}" for v in row])
        for stamp, row in zip(stamps, values, strict=True)]


def test_minutes_since_midnight_are_named_as_such_not_as_hhmm(tmp_path):
    """ "2021-06-01" beside "90" (01:30, the start of the record): the refusal named
    HHMM, whose fix ("%H%M") reads "90" as no clock at all; the count it names now
    converts to the clock it gives. Since layouts47 a column of minutes beside a date
    column is read (test_robustness_layouts47); the count joined to the date in one
    field is still named."""
    ends, values = _records()
    starts = ends - pd.Timedelta("30min")
    minutes = starts.hour * 60 + starts.minute
    path = tmp_path / "minutes.csv"
    joined = starts.strftime("%Y-%m-%d ") + minutes.astype(str)
    lines = _lines(zip(joined, strict=True), values, head="stamp")
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TimestampError) as caught:
        _read(path, time_marks="start")
    message = str(caught.value)
    named = re.search(r"counts the minutes of the day \('(\d+)' is (\d\d):(\d\d)\)", message)
    assert named, message
    count, hours, minutes = map(int, named.groups())
    assert count == 60 * hours + minutes and count % 100 >= 60     # no hhmm clock reads it
    assert "HHMM" not in message and "%H%M" not in message


def test_rows_sorted_by_their_flag_are_not_called_a_clock_reset(tmp_path):
    ends, values = _records()
    flag = _flags(len(ends))
    order = np.argsort(flag, kind="stable")
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    path = tmp_path / "by_flag.csv"
    path.write_text("\n".join(_lines(zip(stamps[order], strict=True), values[order])) + "\n")
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert "2 runs of records in time order that interleave" in message
    assert "sorted by another column" in message and "sort a copy of the file by time" in message
    assert "clock reset" not in message and "misplace" not in message


def test_a_clock_reset_is_still_named_beside_the_sorted_rows_test(tmp_path):
    """Rows stamped 2000-01-01 after a power loss, then the record going on: the records
    pass between the two runs twice, no interleaving; the reset keeps its line."""
    ends, values = _records()
    stamps = list(ends.strftime("%Y-%m-%d %H:%M"))
    stamps[200:204] = [f"2000-01-01 0{k}:00" for k in range(4)]
    path = tmp_path / "reset.csv"
    path.write_text("\n".join(_lines(zip(stamps, strict=True), values)) + "\n")
    with pytest.raises(NonMonotonicTimestampError, match="clock reset") as caught:
        _read(path)
    assert "interleave" not in str(caught.value)


def test_a_daily_summary_line_after_every_48_records_is_named(tmp_path):
    """Each line's values the next day's means, not its records': no proof that it holds
    no record, so named, not dropped (layouts47 drops them where they are the day's)."""
    ends, values = _records()
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    lines = [",".join(["stamp"] + NAMES)]
    for day in range(4):
        rows = slice(48 * day, 48 * (day + 1))
        lines += _lines(zip(stamps[rows], strict=True), values[rows])[1:]
        later = slice(48 * (day + 1), 48 * (day + 2))
        lines.append(",".join(["daily mean"] + [f"{v:.3f}" for v in values[later].mean(0)]))
    path = tmp_path / "daily.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert "line 50 " in message
    assert "stamps that fail come one after every 48 records" in message
    assert "summary lines" in message and "remove them in a copy of the file" in message


def test_a_day_file_closed_by_a_line_of_the_date_alone_is_not_sorted(tmp_path):
    """A day's records, then "2021-06-01,<means>": the date alone is a midnight that
    goes back in time; named a ring memory read from its start before, whose fix
    (sort) reads the summary as a record at 00:00. Its values here another day's means
    (layouts47 drops such a line where they are its records')."""
    ends, values = _records()
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    lines = _lines(zip(stamps[:48], strict=True), values[:48])
    lines.append(",".join(["2021-06-01"] + [f"{v:.3f}" for v in values[48:96].mean(0)]))
    path = tmp_path / "day.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert "line 50 " in message and "a date alone ('2021-06-01', read as 00:00)" in message
    assert "Remove such lines in a copy of the file" in message
    assert "two runs" not in message and "sort a copy" not in message


def test_a_day_file_of_start_stamps_closed_by_its_date_names_the_summary(tmp_path):
    """Start stamps 00:00 .. 23:30, then "2021-06-01,<means>": the date alone repeats
    the first record's stamp; one day was told "keep one of them" (either). Its values
    here another day's means."""
    ends, values = _records()
    stamps = (ends - pd.Timedelta("30min")).strftime("%Y-%m-%d %H:%M")
    lines = _lines(zip(stamps[:48], strict=True), values[:48])
    lines.append(",".join(["2021-06-01"] + [f"{v:.3f}" for v in values[48:96].mean(0)]))
    path = tmp_path / "day.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(path, time_marks="start")
    message = str(caught.value)
    assert "once as the date alone ('2021-06-01'), 1 day(s): daily summary lines" in message
    assert "keep one of them" not in message


def test_a_month_file_closed_by_a_line_of_its_month_names_the_summary(tmp_path):
    """Its values here the records' means plus one: not the month's, so named."""
    ends, values = _records()
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    lines = _lines(zip(stamps, strict=True), values)
    lines.append(",".join(["2021-06"] + [f"{v + 1:.3f}" for v in values.mean(0)]))
    path = tmp_path / "month.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert f"line {len(lines)} " in message
    assert "'2021-06' is the start of the records' dates: a summary line" in message
