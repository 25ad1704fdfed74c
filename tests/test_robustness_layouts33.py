"""Layouts of the layouts33 round: month (or year) files whose stamps change from end to
start marks between two files, Unix seconds under a compact stamp format, stamps whose
fields are separated by other characters than the format's, and a site flag of the other
scale.

Outside facts, each named beside its check: a record's stamp marks the start or the end
of its averaging interval, and a file of whole days so stamped runs 00:00 .. 23:30 or
00:30 .. 24:00 (common practice); Unix time counts seconds since 1970-01-01 00:00 UTC
(POSIX.1-2017, "Seconds Since the Epoch" (m)), checked against the standard library's
``datetime.fromtimestamp``; ISO 8601-1:2019 writes dates with "-" and times with ":"
(m), spreadsheets with "/" (common practice); towers keep about 65 % of their records
(Falge et al. 2001, Agric. For. Meteorol. 107, 43-69 (m)). Everything else is invented
known truth: the records as written.
"""

from datetime import datetime, timezone

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.errors import DuplicateTimestampError, ImplausibleValueError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_hints import _other_separators, _seconds_of_day

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
FORMAT = "%Y-%m-%d %H:%M"


def _read(path, **kwargs):
    options = {"columns": MAPPING, "time_column": "stamp", "time_format": FORMAT,
               "time_marks": "end", "site": SITE}
    options.update(kwargs)
    return read_table(path, **options)


def _month_files(tmp_path, start_from: int):
    """Three invented 10-day files of end stamps; from file `start_from` on the stamps
    mark the interval's start (a logger program changed and stayed so)."""
    starts, records = _tower(periods=48 * 30)
    paths = []
    for number in range(3):
        part = records.iloc[number * 480:(number + 1) * 480].copy()
        if number >= start_from:
            part["stamp"] = starts[number * 480:(number + 1) * 480].strftime(FORMAT)
        paths.append(tmp_path / f"m{number}.csv")
        part.to_csv(paths[-1], index=False)
    return paths


# ------------------------------------------- stamps changed from end to start marks
def test_files_changed_from_end_to_start_marks_name_both_readings(tmp_path):
    """End-stamped 10-day files, the last one stamped at interval starts (a logger
    program changed and stayed so): the files meet in one stamp, midnight, with other
    values, and no record is left empty at the other end (layouts22's rule names only
    that). The refusal said "remove one copy of the overlap", after which the last
    file is read 30 minutes early without a word. Now both readings are named: two
    records under two conventions, or one record written twice (invented known truth:
    the second file holds 24:00 and the third 00:00 of the next day)."""
    paths = _month_files(tmp_path, start_from=2)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(paths)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert (f"{str(paths[1])!r} and {str(paths[2])!r} share this one stamp, the last of "
            "the first and the first of the second") in message
    # the calendar: 2021-06-21 00:00 is 24:00 of the 20th (end marks) and 00:00 of the
    # 21st (start marks)
    assert ("the first ends 2021-06-20 at 24:00, as end marks do, the second begins "
            "2021-06-21 at 00:00, as start marks do") in message
    assert "read one record (30 minutes) off" in message
    assert "one record written twice" in message
    assert "remove one copy of the overlap" not in message


def test_a_change_to_start_marks_where_nee_is_missing_at_the_join_is_not_two_loggers(
        tmp_path):
    """The same change where the first of the two rows has no NEE: the refusal named
    "two loggers' files joined by stamp" (the files complete each other in nee), which
    one shared stamp cannot show. Now the change of marks is named."""
    paths = _month_files(tmp_path, start_from=2)
    text = paths[1].read_text().splitlines()
    cells = text[-1].split(",")
    cells[1] = ""
    paths[1].write_text("\n".join(text[:-1] + [",".join(cells)]) + "\n")
    # the second row's air temperature another record's, beyond any rounding of the first
    later = paths[2].read_text().splitlines()
    cells = later[1].split(",")
    cells[4] = f"{float(cells[4]) - 1.29:.2f}"
    paths[2].write_text("\n".join(later[:1] + [",".join(cells)] + later[2:]) + "\n")
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(paths)
    message = str(caught.value)
    assert "share this one stamp" in message
    assert "two loggers' files" not in message


def test_a_record_left_empty_still_names_the_file_of_the_other_marks(tmp_path):
    """A middle file of start marks between end-marked ones leaves a record empty at its
    other end: layouts22's message naming that file is kept (it says more)."""
    paths = _month_files(tmp_path, start_from=1)
    text = paths[2].read_text().splitlines()
    # the third file back to end marks: a hole after the second file's last record
    starts, _ = _tower(periods=48 * 30)
    ends = (starts[960:1440] + pd.Timedelta(minutes=30)).strftime(FORMAT)
    body = [",".join([end] + line.split(",")[1:]) for end, line in zip(ends, text[1:],
                                                                        strict=True)]
    paths[2].write_text("\n".join([text[0]] + body) + "\n")
    with pytest.raises(DuplicateTimestampError) as caught:
        _read(paths)
    assert f"{str(paths[1])!r} meets its neighbour in this one stamp" in str(caught.value)


# --------------------------------------------- Unix seconds under a compact format
def test_unix_seconds_under_a_compact_format_are_named_not_as_unpadded_fields(tmp_path):
    """Unix seconds ('1622509200', 10 digits) under time_format = "%Y%m%d%H%M" (12)
    were refused as fields written without their leading zero ('2021111' is 1 November
    or 11 January). Now the clock is named with the first stamp's date in UTC."""
    starts, records = _tower(periods=48 * 3)
    ends_utc = starts + pd.Timedelta(minutes=30) - pd.Timedelta(hours=1)
    seconds = ((ends_utc - pd.Timestamp("1970-01-01")) // pd.Timedelta(seconds=1))
    records["stamp"] = seconds.astype(str)
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "a.csv", time_format="%Y%m%d%H%M")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    # Python's datetime, the POSIX epoch: the first stamp in UTC
    first = datetime.fromtimestamp(int(seconds[0]), tz=timezone.utc)
    assert f"'{seconds[0]}' is {first:%Y-%m-%d %H:%M} UTC" in message
    assert "seconds since 1970-01-01 UTC (Unix time)" in message
    assert "leading zero" not in message


# ----------------------------------------------------- other separators in the stamps
def test_stamps_with_other_separators_name_the_format_that_reads_them(tmp_path):
    """'2021/06/01 00:30' under "%Y-%m-%d %H:%M" was refused with no hint; now the
    format with the stamps' separators is named, and it reads the file to the stamp."""
    starts, records = _tower(periods=48 * 3)
    records["stamp"] = (starts + pd.Timedelta(minutes=30)).strftime("%Y/%m/%d %H:%M")
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(TimestampError, match=r'other characters than time_format does: '
                                             r'time_format = "%Y/%m/%d %H:%M"'):
        _read(tmp_path / "a.csv")
    frame, _ = _read(tmp_path / "a.csv", time_format="%Y/%m/%d %H:%M")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"),
                                  check_exact=True)


@pytest.mark.parametrize(("stamp", "time_format", "expected"), [
    ("2021/06/01 00:30", "%Y-%m-%d %H:%M", "%Y/%m/%d %H:%M"),
    ("2021-06-01T00:30", "%Y-%m-%d %H:%M", ""),      # ISO 8601's T (m): named elsewhere
    ("2021/06/01T00:30", "%Y-%m-%d %H:%M", ""),
    ("01.06.2021 00:30", "%d/%m/%Y %H:%M", "%d.%m.%Y %H:%M"),
    ("2021-06-01 00:30", "%Y-%m-%d %H:%M", ""),                    # the same separators
    ("202106010030", "%Y%m%d%H%M", ""),                            # no separators at all
    ("2021/06/01", "%Y-%m-%d %H:%M", ""),                          # other field count
])
def test_other_separators_on_their_own(stamp, time_format, expected):
    """The separators are exchanged in order, only where counts match and some differ."""
    assert _other_separators(stamp, time_format) == expected


# -------------------------------------------------------- a flag of the other scale
def test_a_flag_of_the_other_scale_is_refused_naming_both_readings(tmp_path):
    """A flag written 2 for a good record and 0 for a bad one under flag_accept = [0]
    kept the 0.3 % bad records with a warning; the run then stopped at the partitioning
    naming missing night records. Beyond 95 % rejected (process()'s rule for a frame's
    flag) the reader now refuses, naming each value's count and both readings; towers
    keep about 65 % of their records (Falge et al. 2001 (m)). Under flag_accept = [2]
    the file reads with the flag keeping those records."""
    starts, records = _tower(periods=48 * 20)
    records["qc"] = np.where(np.arange(len(records)) % 300 == 7, 0, 2)
    records.to_csv(tmp_path / "a.csv", index=False)
    columns = MAPPING | {"nee_flag": "qc"}
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "a.csv", columns=columns)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert message.startswith("nee_flag: 956 of 960 records with an NEE value (99.6 %) "
                              "are rejected by qc "
                              "with [input] flag_accept = [0] (the flags hold 2 in 956, "
                              "0 in 4 records)")
    assert "a flag of the other scale" in message
    assert "the site's own checks reject nearly every record" in message
    frame, _ = _read(tmp_path / "a.csv", columns=columns, flag_accept=[2])
    assert int((frame["nee_flag"] == 0).sum()) == 956
    # a flag rejecting most but not nearly all records stays a warning (90 %)
    records["qc"] = np.where(np.arange(len(records)) % 10 == 0, 0, 2)
    records.to_csv(tmp_path / "b.csv", index=False)
    _, report = _read(tmp_path / "b.csv", columns=columns)
    assert any(w.startswith("nee_flag: 864 of 960 records with an NEE value (90 %)") for w in report.warnings)


# ------------------------------------- a record left empty at the join of two files
def _sunny_files(tmp_path, first_marks: str, drop_last_of_first: bool = False):
    """Two invented files of a June tower, 10 and 20 days: Rg 0.7 of the potential
    radiation of each interval (a clear sky, known truth), the first file stamped at
    `first_marks`, the second at interval ends."""
    from fluxpart.solar import potential_radiation

    starts, records = _tower(periods=48 * 30)
    records["sw"] = np.round(0.7 * potential_radiation(starts, SITE.latitude,
                                                       SITE.longitude, SITE.utc_offset,
                                                       interval_minutes=30), 1)
    first, second = records.iloc[:480].copy(), records.iloc[480:].copy()
    if first_marks == "start":
        first["stamp"] = starts[:480].strftime(FORMAT)
    if drop_last_of_first:
        first = first.iloc[:-1]
    first.to_csv(tmp_path / "a.csv", index=False)
    second.to_csv(tmp_path / "b.csv", index=False)
    return [tmp_path / "a.csv", tmp_path / "b.csv"], starts, records


def test_a_first_file_of_start_marks_before_end_marks_is_refused_naming_both(tmp_path):
    """A 10-day file stamped at interval starts before a file of end marks, read with
    time_marks = "end": the join leaves one stamp empty, and the first file's records were
    read 30 minutes early without a word (the monthly clock check passed: a third of the
    month). Now refused: Rg in the first file comes 30 minutes earlier against the sun
    than in the second, so both readings (the marks changed, or a record was lost and
    the clock set) are named (invented known truth: Rg 0.7 of the potential)."""
    paths, starts, _ = _sunny_files(tmp_path, first_marks="start")
    with pytest.raises(TimestampError) as caught:
        _read(paths)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    hole = starts[479]          # the first file's last record, read one record early
    assert (f"input files {str(paths[0])!r} and {str(paths[1])!r} leave the record of "
            f"{hole:%Y-%m-%d %H:%M} (interval start) between them empty") in message
    assert "-30 min against the sun" in message and "+0 min in" in message
    assert "mark the other end of the interval" in message
    assert "the logger lost that record" in message


def test_a_record_lost_at_the_join_of_files_of_one_convention_is_read(tmp_path):
    """The same files, both of end marks, the first lacking its last record (lost at
    the change of file): Rg sits where the sun is in both, so the record is read as
    one missing interval, the others at their own starts (known truth)."""
    paths, starts, records = _sunny_files(tmp_path, first_marks="end",
                                          drop_last_of_first=True)
    frame, _ = _read(paths)
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))
    assert np.isnan(frame["rg"].iloc[479])
    np.testing.assert_array_equal(frame["rg"].to_numpy()[480:],
                                  records["sw"].to_numpy()[480:])


def test_the_lag_of_rg_behind_the_sun_is_recovered():
    """Rg built from the potential radiation of stamps k minutes off gives a lag of k
    (k = -30, 0, +30), within 3 minutes (the interval's mean against the centre of its
    half hour); days with too few records are not judged (known truth)."""
    from fluxpart.file_joins import radiation_lag_minutes
    from fluxpart.solar import potential_radiation

    starts = pd.date_range("2021-06-01", periods=48 * 10, freq="30min")
    sun = potential_radiation(starts, 49.3, 10.2, 1.0, interval_minutes=30)
    for lag in (-30, 0, 30):
        rg = 0.7 * potential_radiation(starts - pd.Timedelta(minutes=lag), 49.3, 10.2,
                                       1.0, interval_minutes=30)
        found, days = radiation_lag_minutes(starts, rg, sun, 30)
        assert days == 10 and abs(found - lag) <= 3
    holed = np.where(np.arange(len(starts)) % 48 < 30, np.nan, sun)
    assert radiation_lag_minutes(starts, holed, sun, 30) == (pytest.approx(np.nan,
                                                                           nan_ok=True), 0)


# ------------------------------------------------------ seconds of the day as the time
def test_a_time_field_of_seconds_of_the_day_is_named(tmp_path):
    """A date column beside the time of day as seconds since midnight ('3600' for 01:00;
    a day holds 86,400 s, SI) under "%Y-%m-%d %H%M" was refused as stamps that fail to
    parse, with no cause (some, '1800', read as 18:00); then named (layouts33). Since
    layouts47 such a column of its own is read as the clock it counts, with a note; the
    same count joined to the date in one field is still named, not read."""
    starts, records = _tower(periods=48 * 3)
    ends = starts + pd.Timedelta(minutes=30)
    records.insert(0, "date", ends.strftime("%Y-%m-%d"))
    records["stamp"] = ends.hour * 3600 + ends.minute * 60
    records.to_csv(tmp_path / "a.csv", index=False)
    frame, report = _read(tmp_path / "a.csv", time_column=["date", "stamp"],
                          time_format="%Y-%m-%d %H%M")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))
    assert any("counts the seconds of the day ('3600' is 0100)" in n for n in report.notes)
    assert not report.warnings
    records["date"] = records["date"] + " " + records.pop("stamp").astype(str)
    records.to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "b.csv", time_column="date", time_format="%Y-%m-%d %H%M")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    # 01:00 is 3600 s, the first count above 2400 (the largest hhmm)
    assert "the time field counts the seconds of the day ('3600' is 01:00)" in message
    # an hhmm column (its counts at most 2400) is no such field
    assert _seconds_of_day(pd.Series(["2021-06-01 0030", "2021-06-01 0100",
                                      "2021-06-01 2400"]), "%Y-%m-%d %H%M") == ""
