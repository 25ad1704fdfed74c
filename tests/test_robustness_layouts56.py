"""Layouts of the layouts56 round: numbers with Fortran's exponent letter D written with a
decimal comma, counts of time that date their records beyond the range of a stamp, and a
count's epoch stated above the header that the settings contradict.

Outside facts, each named beside its check: Fortran writes the exponent letter D for
double precision (ISO/IEC 1539-1, the D edit descriptor (m)) and, in the decimal-comma
mode of the DECIMAL= specifier (Fortran 2003 on (m)), a comma as the decimal mark; the
CF conventions write a count of time as "<unit> since <date>" (section 4.4 (m)); pandas
stamps of nanoseconds end at ``pandas.Timestamp.max`` (2262-04-11, the general-purpose
reference library itself); Python's ``datetime`` dates the counts. Everything else is
invented known truth: the records as written.
"""
from datetime import datetime, timedelta

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.counted_time import dated
from fluxpart.errors import FluxpartError
from fluxpart.fortran_numbers import e_exponents
from fluxpart.io import read_table
from fluxpart.stamp_places import stated_count_message


def _read_counts(path, time_format, **kwargs):
    return read_table(path, columns=MAPPING, time_column="stamp", time_format=time_format,
                      time_marks="end", **kwargs)


def _fortran_comma(value):
    return f"{value:.6E}".replace("E", "D").replace(".", ",")


def test_d_exponents_with_a_decimal_comma_are_read_as_the_numbers(tmp_path):
    """Refused before as "a number followed by a unit in the cell ('D-01')". Now read as
    the numbers, each column's count warned, as in a file of decimal points."""
    _, records = _tower()
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    written = records.copy()
    for column in ("co2_flux", "us", "sw", "t_air", "vpd"):
        written[column] = [_fortran_comma(v) for v in records[column]]
    (tmp_path / "fortran.csv").write_text(written.to_csv(index=False, sep=";"))
    clean, _ = _read(tmp_path / "clean.csv")
    frame, report = _read(tmp_path / "fortran.csv", delimiter=";", decimal=",")
    # six significant digits written: the values as Python reads the E form of each cell
    expected = clean.copy()
    for name, column in (("nee", "co2_flux"), ("ustar", "us"), ("rg", "sw"),
                         ("tair", "t_air")):
        expected[name] = [float(f"{v:.6E}") for v in records[column]]
    for name in ("nee", "ustar", "rg", "tair"):
        np.testing.assert_array_equal(frame[name].to_numpy(), expected[name].to_numpy())
    assert sum("exponent letter D" in w for w in report.warnings) == 5


def test_d_exponent_cells_follow_the_files_decimal_mark():
    """A comma is a decimal mark only where the file says so: "3,29D-01" is no number of
    a file of points, "3.29D-01" none of a file of commas (its points group thousands)."""
    cells = pd.Series(["3,29D-01", "-1,5d+02", "7", "3.29D-01"])
    comma, count, mask = e_exponents(cells, ",")
    assert list(comma) == ["3,29E-01", "-1,5E+02", "7", "3.29D-01"] and count == 2
    point, count, _ = e_exponents(cells, ".")
    assert list(point) == ["3,29D-01", "-1,5d+02", "7", "3.29E-01"] and count == 1
    assert float(point[3]) == 0.329                       # Python's float of the E form


def test_counts_past_the_stamps_range_are_refused_naming_the_year(tmp_path):
    """Day numbers counted from year 0 (a numerics program's: 738157 is 2021-01-01, as
    Python's date.toordinal gives 737791 counted from 0001-01-01, plus 366) read as days
    since 1970: a crash before (pandas' OutOfBoundsTimedelta). Now one error naming the
    year they would fall in (about 3991)."""
    starts, records = _tower()
    ordinal = datetime(2021, 1, 1).toordinal() + 366
    assert ordinal == 738157
    ends = starts + pd.Timedelta("30min")
    written = records.copy()
    written["stamp"] = [f"{ordinal + (e - pd.Timestamp('2021-01-01')) / pd.Timedelta('1D'):.5f}"
                        for e in ends]
    (tmp_path / "days.csv").write_text(written.to_csv(index=False))
    with pytest.raises(FluxpartError, match=r"in the year 399\d, after .*another reference"):
        _read_counts(tmp_path / "days.csv", "days since 1970-01-01")


def test_dated_follows_the_range_of_a_pandas_stamp():
    """pandas.Timestamp.max (2262-04-11 23:47) bounds the counts a stamp can hold (a day
    within it is kept)."""
    reference = pd.Timestamp("1970-01-01")
    room = (pd.Timestamp.max - reference).total_seconds()
    numbers = np.array([0.0, room - 86400, room + 10, -(room + 10), np.nan])
    assert list(dated(numbers, 1.0, reference)) == [True, True, False, False, False]
    days = np.array([738157.0, 18628.0])
    assert list(dated(days, 86400.0, reference)) == [False, True]


def _counted(tmp_path, title, time_format):
    starts, records = _tower()
    ends = starts + pd.Timedelta("30min")
    written = records.copy()
    epoch = datetime(1990, 1, 1)
    written["stamp"] = [str(int((e.to_pydatetime() - epoch) / timedelta(seconds=1)))
                        for e in ends]
    (tmp_path / "t.csv").write_text(title + "\n" + written.to_csv(index=False))
    return _read_counts(tmp_path / "t.csv", time_format, rows_before_header=1)


def test_a_logger_epoch_stated_above_the_header_contradicting_the_format_is_refused(tmp_path):
    """Counts since 1990-01-01 read as Unix time land 20 years early (2001), a year no
    check of the stamps refuses: read so before. Now refused naming the line and the
    setting that reads it; the same line with the matching setting reads the stamps."""
    title = "Logger time: seconds since 1990-01-01 00:00:00"
    with pytest.raises(FluxpartError, match=r"line 1 .*seconds since 1990-01-01 00:00:00.*"
                       r"20\.0 years apart; set time_format = \"seconds since 1990"):
        _counted(tmp_path, title, "seconds since 1970-01-01")
    frame, _ = _counted(tmp_path, title, "seconds since 1990-01-01 00:00:00")
    starts, _ = _tower()
    assert list(frame.index) == list(starts)


def test_a_stated_count_judges_unit_reference_and_a_stated_clock_only():
    """A line silent on the clock leaves a setting's UTC alone; another unit, reference or
    stated clock is named; a format that counts nothing is not judged."""
    line = [("line 1 of 'a.csv'", "Epoch: seconds since 1990-01-01")]
    assert stated_count_message(line, "seconds since 1990-01-01 00:00 UTC") is None
    assert stated_count_message(line, "%Y-%m-%d %H:%M") is None
    assert "units 60 times" in stated_count_message(
        [("line 1 of 'a.csv'", "minutes since 1990-01-01")], "seconds since 1990-01-01")
    assert "clocks' offset" in stated_count_message(
        [("line 1 of 'a.csv'", "seconds since 1990-01-01 UTC")], "seconds since 1990-01-01")
    assert stated_count_message([("line 1 of 'a.csv'", "Station Oakmere, since 2019")],
                                "seconds since 1990-01-01") is None


def test_a_format_without_a_year_is_named_as_written(tmp_path):
    """A fractional day of the year ("64.60417") under time_format = "%j": refused, as
    strptime puts stamps without a year in 1900 (Python's documentation of
    ``datetime.strptime`` (m)), naming "%j" as written, not the reader's rewriting of the
    decimal day ("%j %H:%M:%S", named before)."""
    assert datetime.strptime("64", "%j").year == 1900
    starts, records = _tower()
    ends = starts + pd.Timedelta("30min")
    written = records.copy()
    written["stamp"] = [f"{(e - pd.Timestamp('2021-01-01')) / pd.Timedelta('1D') + 1:.5f}"
                        for e in ends]
    (tmp_path / "doy.csv").write_text(written.to_csv(index=False))
    with pytest.raises(FluxpartError, match=r'time_format = "%j" cannot be used: it has no '
                                            r'year') as refusal:
        _read_counts(tmp_path / "doy.csv", "%j")
    assert "%H" not in str(refusal.value).split("cannot be used")[0]
