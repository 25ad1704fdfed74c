"""Layouts of the layouts39 round: a station's files over time. Two loggers' files of one
period whose clocks differ by whole records, civil-time files cut inside the hour that
clocks repeat when daylight saving ends, and a later file with another units line.

Outside facts, each named beside its check: civil time in Europe/Berlin repeats 02:00-03:00
on 2021-10-31 (CEST, UTC+2, then CET, UTC+1), from the IANA time zone database through
Python's zoneinfo, a general-purpose reference; two loggers that write the same run of
records begin and end together (a fact of the trade). Everything else is invented known
truth: the records as written.
"""
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE, UNITS_LINE
from test_robustness_layouts37 import _assert_all

from fluxpart.civil_splits import second_pass_head
from fluxpart.errors import MissingColumnError
from fluxpart.io import read_table
from fluxpart.joined_clocks import span_shift_minutes
from fluxpart.later_files import lines_under_header, no_record


def _read(path, **options):
    settings = {"time_column": "stamp", "time_format": "%Y%m%d%H%M", "time_marks": "end"}
    settings.update(options)
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE, **settings)


def _flux_and_met(tmp_path, shift_minutes):
    frame, ends = _records()
    met = frame[["stamp", "sw", "t_air", "vpd"]].copy()
    met["stamp"] = (ends - pd.Timedelta(minutes=shift_minutes)).strftime("%Y%m%d%H%M")
    frame[["stamp", "co2", "us"]].to_csv(tmp_path / "flux.csv", index=False)
    met.to_csv(tmp_path / "met.csv", index=False)
    return frame, ends, [tmp_path / "flux.csv", tmp_path / "met.csv"]


@pytest.mark.parametrize("shift", [30, 60, -60])
def test_loggers_whose_clocks_differ_by_whole_records_are_refused(tmp_path, shift):
    """Joined silently before layouts39, each NEE beside the meteorology of another
    interval (one record more at an end)."""
    _, _, paths = _flux_and_met(tmp_path, shift)
    side = "after" if shift > 0 else "before"
    with pytest.raises(MissingColumnError, match=rf"first and last stamps both {abs(shift)} "
                                                 rf"minutes {side} .*clocks differ by "
                                                 rf"{abs(shift)} minutes"):
        _read(paths)


def test_loggers_of_one_clock_are_joined(tmp_path):
    frame, ends, paths = _flux_and_met(tmp_path, 0)
    read, report = _read(paths)
    _assert_all(read, frame, ends)
    assert any("joined by stamp" in w for w in report.warnings)


def test_span_shift_needs_both_ends_apart_alike():
    stamps = pd.date_range("2021-06-01", periods=480, freq="30min").to_numpy()
    assert span_shift_minutes(stamps - np.timedelta64(30, "m"), stamps, 30) == -30.0
    # a meteorological logger installed later (start apart, end together): no shift
    assert span_shift_minutes(stamps[100:], stamps, 30) is None
    # a logger that ran a day longer: the spans differ
    assert span_shift_minutes(stamps + np.timedelta64(1, "D"), stamps, 30) is None
    assert span_shift_minutes(stamps, stamps, 30) is None


def _civil_files(tmp_path, cut_at, cut_pass):
    """Invented records around 2021-10-31 written in Europe/Berlin civil time, cut into
    two files before pass `cut_pass` (0 or 1) of the civil stamp `cut_at`."""
    frame, _ = _records(96)
    ends = pd.date_range("2021-10-30 12:30", periods=96, freq="30min")
    zone = ZoneInfo("Europe/Berlin")
    # the zone's civil clock: UTC+2 (CEST) until 01:00 UTC on 31 October, then UTC+1
    civil = [(end - pd.Timedelta(hours=1)).tz_localize("UTC").astimezone(zone)
             .strftime("%Y%m%d%H%M") for end in ends]
    frame["stamp"] = civil
    cut = [i for i, s in enumerate(civil) if s == cut_at][cut_pass]
    frame.iloc[:cut].to_csv(tmp_path / "a.csv", index=False)
    frame.iloc[cut:].to_csv(tmp_path / "b.csv", index=False)
    return frame, ends, [tmp_path / "a.csv", tmp_path / "b.csv"]


@pytest.mark.parametrize("cut_at, cut_pass", [("202110310230", 1), ("202110310200", 1)])
def test_civil_files_cut_inside_the_repeated_hour_read_in_time_order(tmp_path, cut_at,
                                                                      cut_pass):
    """Refused before layouts39 ("overlapping files disagree"): the second file's first
    stamps read as the summer pass a second time."""
    frame, ends, paths = _civil_files(tmp_path, cut_at, cut_pass)
    assert frame["stamp"].duplicated().sum() == 2      # 02:00 and 02:30 twice (zoneinfo)
    read, report = _read(paths, time_zone="Europe/Berlin")
    _assert_all(read, frame, ends)
    assert any("repeats" in w and "second pass" in w for w in report.warnings)


def test_second_pass_head_leaves_a_repeated_first_pass_alone():
    """A file that writes the summer pass again (a restart) before the second pass
    keeps it as an overlap: moved, it would collide with the file's own second pass."""
    standard = pd.date_range("2021-10-31 00:00", periods=8, freq="30min")   # UTC+1
    earlier = standard[:4].to_numpy()                     # 01:00 .. 02:30 CEST (civil)
    later = standard[2:].to_numpy()           # 02:00, 02:30 CEST again, then the CET pass
    assert second_pass_head(earlier, later, "Europe/Berlin", 1.0) == (0, 0.0)
    assert second_pass_head(earlier, standard[2:4].to_numpy(), "Europe/Berlin", 1.0) == (2, 1.0)


@pytest.mark.parametrize("first_has_units", [False, True])
def test_a_later_file_with_other_units_lines_is_read_past_them(tmp_path, first_has_units):
    """Refused before layouts39 (the units line's '-' taken for a stamp, or the later
    file's first record skipped as a units line): a logger swapped mid-period whose
    program writes a units line under the header where the old one wrote none, or none
    where the old one wrote one."""
    frame, ends = _records()
    header, *records = frame.to_csv(index=False).splitlines()
    first = [header, UNITS_LINE, *records[:200]] if first_has_units else [header, *records[:200]]
    later = [header, *records[200:]] if first_has_units else [header, UNITS_LINE, *records[200:]]
    (tmp_path / "a.csv").write_text("\n".join(first) + "\n")
    (tmp_path / "b.csv").write_text("\n".join(later) + "\n")
    read, report = _read([tmp_path / "a.csv", tmp_path / "b.csv"],
                         rows_after_header=int(first_has_units))
    _assert_all(read, frame, ends)
    assert any("other lines under the header line" in w for w in report.warnings)


def test_a_units_line_is_told_from_a_record_by_its_time_cell():
    header = "stamp,co2,sw"
    assert no_record("-,umol m-2 s-1,W m-2", header, ",", ("stamp",))
    assert no_record("TS,Avg,Avg", header, ",", ("stamp",))
    # a record whose every value is missing still writes its stamp's digits
    assert not no_record("202106010030,NAN,NAN", header, ",", ("stamp",))
    assert not no_record("-,umol m-2 s-1", header, ",", ("stamp",))      # narrower
    assert lines_under_header([header, "-,a,b", "202106010030,1.0,2.0"], 0, ",",
                              ("stamp",)) == 1


@pytest.mark.parametrize("case", ["cut after the first pass's 02:00", "first pass lacks 02:00"])
def test_a_file_going_back_inside_the_repeated_hour_reads_the_second_pass(tmp_path, case):
    """Refused before review52 ("stamps go backwards"): a stamp of the repeated hour that
    a file has not held before but that comes after a later civil stamp (the file begins
    inside the first pass, or the first pass lost a record) was read as summer time by
    its first occurrence. Civil time runs forward except where the autumn hour repeats
    (Europe/Berlin 02:00-03:00 on 2021-10-31, IANA database through zoneinfo), so going
    back there is the second pass."""
    frame, ends, paths = _civil_files(tmp_path, "202110310230", 0)
    if case == "first pass lacks 02:00":
        gap = frame["stamp"].eq("202110310200").idxmax()       # the first pass's 02:00
        missing = ends[gap] - pd.Timedelta("30min")             # 00:30 standard time
        frame, ends = frame.drop(index=gap), ends.delete(gap)
        frame.to_csv(tmp_path / "one.csv", index=False)
        paths = [tmp_path / "one.csv"]
    read, _ = _read(paths, time_zone="Europe/Berlin")
    if case == "first pass lacks 02:00":
        assert read.loc[missing].isna().all()               # the lost record, missing
        read = read.drop(index=missing)
    _assert_all(read, frame, ends)


def test_loggers_run_apart_from_start_to_end_are_told_how_to_join(tmp_path):
    """A meteorological logger started and stopped one record after the flux logger, its
    clock right, has the spans of a clock 30 minutes off: refused (the stamps cannot tell
    the two apart). Before review52 the message named only the clock's fix; now it names
    the records to remove for the other reading, and removing them joins the files."""
    frame, ends = _records()
    frame[["stamp", "co2", "us"]].iloc[:-1].to_csv(tmp_path / "flux.csv", index=False)
    met = frame[["stamp", "sw", "t_air", "vpd"]].iloc[1:]
    met.to_csv(tmp_path / "met.csv", index=False)
    paths = [tmp_path / "flux.csv", tmp_path / "met.csv"]
    with pytest.raises(MissingColumnError, match=r"the first 1 of '[^']*flux\.csv' or the "
                                                 r"last 1 of '[^']*met\.csv'"):
        _read(paths)
    met.iloc[:-1].to_csv(tmp_path / "met.csv", index=False)     # its last record removed
    read, _ = _read(paths)
    assert read.index.equals(pd.DatetimeIndex(ends[:-1] - pd.Timedelta("30min"),
                                              name="time").as_unit(read.index.unit))
    assert read["rg"].isna().tolist() == [True] + [False] * (len(read) - 1)
    np.testing.assert_array_equal(read["rg"].to_numpy()[1:], frame["sw"].to_numpy()[1:-1])
