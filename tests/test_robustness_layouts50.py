"""Layouts of the layouts50 round: a year's files as they arrive from the field. A power
cut's zero bytes between a record cut short and the records the logger wrote on after them,
a later file with a title line the first file lacks, and a later file whose dates a
spreadsheet rewrote day first.

Outside facts, each named beside its check: FAT file systems give a file whole clusters
ahead of its data, which read as zeros after a power cut (common practice); a spreadsheet
writes a date cell back in the computer's regional layout on saving as CSV (common
practice); 13 June 2021 has no month-first reading "13/06/2021" (the Gregorian calendar
has 12 months), and "11/06/2021" reads as 11 June day first and 6 November month first.
Everything else is invented known truth: the records as written.
"""
import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts19 import _read, _tower

from fluxpart.errors import (
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    TimestampError,
)
from fluxpart.later_files import title_lines_added
from fluxpart.resaved_dates import file_layout
from fluxpart.uncertainty import artificial_gap_seed
from fluxpart.zero_runs import without_zero_runs


def _clean(tmp_path, records):
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    return _read(tmp_path / "clean.csv")[0]


def test_zero_bytes_after_a_cut_record_with_records_after_them_are_read_past(tmp_path):
    """Refused before ("line 202 holds zero bytes ... delete them"); now the record the
    zeros cut is dropped (its stamp a gap) and every record after them read as written."""
    starts, records = _tower()
    lines = records.to_csv(index=False).splitlines(keepends=True)
    data = "".join(lines[:201]) + lines[201][:14] + "\x00" * 2048 + "".join(lines[202:])
    (tmp_path / "cut.csv").write_text(data)
    frame, report = _read(tmp_path / "cut.csv")
    expected = _clean(tmp_path, records)
    expected.iloc[200] = np.nan                  # known truth: record 201 was cut
    pd.testing.assert_frame_equal(frame, expected)
    assert list(frame.index) == list(starts)
    warned = [w for w in report.warnings if "run(s) of zero bytes" in w]
    assert len(warned) == 1 and "line 202 cut ('2021-06-05 04:')" in warned[0]


@pytest.mark.parametrize("after", ["half", "none"])
def test_zero_bytes_not_between_a_cut_record_and_a_whole_one_stay_refused(tmp_path, after):
    """Zeros ending inside a record (`half`: its first fields lost) or starting at a line
    (`none`: no record cut, a damaged card's overwrite) say no write was cut: refused."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines(keepends=True)
    zeros = (lines[201][:14] + "\x00" * 64 + lines[202][20:] if after == "half"
             else "\x00" * 64 + lines[202])
    (tmp_path / "cut.csv").write_text("".join(lines[:201]) + zeros + "".join(lines[203:]))
    with pytest.raises(InputFileError, match="holds zero bytes"):
        _read(tmp_path / "cut.csv")
    assert without_zero_runs("a,b,c\n1,2,3\n1,\x00\x002,3,4\n") == (
        "a,b,c\n1,2,3\n2,3,4\n", [(3, "1,")])


def test_a_later_file_with_an_added_title_line_is_read_from_its_header(tmp_path):
    """Refused before ("blocks of different lengths above their header line"); now read
    as the files without it, with a note naming the file."""
    _, records = _tower()
    (tmp_path / "a.csv").write_text(records.iloc[:240].to_csv(index=False))
    (tmp_path / "b.csv").write_text("Tower export by hand, 11-20 June (fictional)\n"
                                    + records.iloc[240:].to_csv(index=False))
    frame, report = _read([tmp_path / "a.csv", tmp_path / "b.csv"])
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert any("more lines above it than [input] rows_before_header = 0" in n
               and "b.csv" in n for n in report.notes)
    header = "stamp,co2_flux,us"
    # a record above the header is no title line: not read so
    assert title_lines_added(["2021-06-01 00:30,1,2", header], header, 0, ",") is None
    assert title_lines_added(["title", "", header], header, 0, ",") == 2


def test_a_later_file_with_dates_rewritten_day_first_is_read_so(tmp_path):
    """Refused before ("every stamp reads as time_format = "%d/%m/%Y %H:%M"", a setting
    that refuses the first file); now read as written, with a note: 13-20 June have no
    month-first reading."""
    _, records = _tower(periods=48 * 20)
    (tmp_path / "a.csv").write_text(records.iloc[:480].to_csv(index=False))
    later = records.iloc[480:].copy()
    later["stamp"] = pd.to_datetime(later["stamp"]).dt.strftime("%d/%m/%Y %H:%M")
    (tmp_path / "b.csv").write_text(later.to_csv(index=False))
    frame, report = _read([tmp_path / "a.csv", tmp_path / "b.csv"])
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert any("every stamp reads as \"%d/%m/%Y %H:%M\"" in n and "b.csv" in n
               for n in report.notes)


@pytest.mark.parametrize("which", ["twelve_days", "first_file"])
def test_dates_rewritten_stay_refused_where_not_provable(tmp_path, which):
    """Day first and month first both read 11-12 June ("11/06/2021" is 6 November month
    first; the record ending 13 June 00:00 left out); a first file has no file read
    before it: refused, naming the layout."""
    _, records = _tower(periods=48 * 20)
    first, later = (records.iloc[:480], records.iloc[480:575].copy()) \
        if which == "twelve_days" else (records.iloc[480:].copy(), records.iloc[:480])
    day_first = later if which == "twelve_days" else first
    day_first["stamp"] = pd.to_datetime(day_first["stamp"]).dt.strftime("%d/%m/%Y %H:%M")
    (tmp_path / "a.csv").write_text(first.to_csv(index=False))
    (tmp_path / "b.csv").write_text(later.to_csv(index=False))
    with pytest.raises((TimestampError, MissingColumnError), match="does not match"):
        _read([tmp_path / "a.csv", tmp_path / "b.csv"])
    assert file_layout(pd.Series(["11/06/2021 00:30"]), "%Y-%m-%d %H:%M") is None
    assert file_layout(pd.Series(["13/06/2021 00:30"]), "%Y-%m-%d %H:%M") == "%d/%m/%Y %H:%M"


def test_a_range_refusal_names_the_files_whose_units_line_writes_another_unit(tmp_path):
    """Air in kelvin from the second file on, its units line saying "K", read in degC:
    refused by the range as before (one [input.units] reads every file), now naming the
    file and its label (before: the range alone, whose fix refused the first file).
    0 degC is 273.15 K (SI Brochure, 9th ed., 2.3.1 (m))."""
    _, records = _tower(periods=48 * 20)
    units_line = "-,umol m-2 s-1,m s-1,W m-2,{},kPa\n"
    later = records.iloc[480:].copy()
    later["t_air"] = np.round(later["t_air"] + 273.15, 2)
    for name, part, unit in (("a.csv", records.iloc[:480], "degC"), ("b.csv", later, "K")):
        text = part.to_csv(index=False).split("\n", 1)
        (tmp_path / name).write_text(text[0] + "\n" + units_line.format(unit) + text[1])
    with pytest.raises(ImplausibleValueError) as caught:
        _read([tmp_path / "a.csv", tmp_path / "b.csv"], rows_after_header=1,
              units={"tair": "degC", "vpd": "hPa"})
    message = str(caught.value)
    assert "lie outside the plausible range" in message and len(message.splitlines()) == 1
    assert (f"the units line of 1 input file(s) writes another unit than the 'degC' every "
            f"file is read in: {str(tmp_path / 'b.csv')!r} ('K')") in message


@pytest.mark.parametrize("setting", [2, 3, 4])
def test_title_blocks_of_other_lengths_are_read_where_one_file_places_the_header(
        tmp_path, setting):
    """Files of 3, 2, 4 and 3 title lines above one header (a line added at a program
    change; the first file among them): refused before unless the setting read the first
    file and the others had fewer lines; now any setting that places one file's header
    reads them all as the plain files read."""
    _, records = _tower(periods=48 * 8)
    paths = []
    for number, count in enumerate([3, 2, 4, 3]):
        block = "".join(f"station note {i}: logger 7{i}\n" for i in range(count))
        path = tmp_path / f"q_{number}.csv"
        path.write_text(block + records.iloc[number * 96:(number + 1) * 96].to_csv(index=False))
        paths.append(path)
    frame, report = _read(paths, rows_before_header=setting)
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))


def test_negative_zeros_seed_the_artificial_gaps_as_zeros(tmp_path):
    """ "-0.000" and "-0" (a logger's rounding of a small negative value) are 0, read as
    written (-0.0 == 0.0); the artificial gaps' seed, a SHA-256 of the NEE bytes, now
    hashes them as their "0.000" twin's (IEEE 754 gives -0.0 a sign bit of its own, and
    -0.0 + 0.0 = +0.0 under rounding to nearest (m)). Before: the intervals of the "-0"
    file differed from its twin's."""
    _, records = _tower()
    records.loc[records["sw"] == 0, "sw"] = 0.0
    records.loc[::97, "co2_flux"] = 0.0
    plain = records.to_csv(index=False, float_format="%.3f")
    (tmp_path / "plain.csv").write_text(plain)
    (tmp_path / "signed.csv").write_text(plain.replace(",0.000,", ",-0.000,")
                                         .replace(",0.000\n", ",-0\n"))
    frame, _ = _read(tmp_path / "signed.csv")
    clean, _ = _read(tmp_path / "plain.csv")
    pd.testing.assert_frame_equal(frame, clean)
    assert np.signbit(frame["nee"].to_numpy()[frame["nee"].to_numpy() == 0]).all()
    assert artificial_gap_seed(frame["nee"]) == artificial_gap_seed(clean["nee"])
