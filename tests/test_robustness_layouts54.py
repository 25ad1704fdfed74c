"""Layouts of the layouts54 round: a logger program change in the middle of one file (its
header block written again with columns reordered, inserted or dropped), a restart that
writes the last record again with cells missing, and fixed widths one character off.

Outside facts, each named beside its check: the first line of a CSV file may be a header
of names, one name per field (RFC 4180 §2 (m)), so the records after a header written
again are read under it; a fixed-width column pads each name and value with blanks to its
width (common practice of fixed-width exports), so a cut that falls inside the padding
between two names has cut the header in the wrong place. Everything else is invented known
truth: the records as written (``test_robustness_layouts26._records``, 1-8 June 2021), read
from the file's parts written as files of their own.
"""
import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records

from fluxpart import program_parts
from fluxpart.errors import DuplicateTimestampError, InputFileError

TITLE = "Logger,quill_v3,Signature,40871"
UNITS = {"stamp": "TS", "co2_flux": "umol m-2 s-1", "us": "m s-1", "sw": "W m-2",
         "t_air": "degC", "vpd": "hPa", "batt": "V"}


def _frame(count=96 * 8):
    ends, values = _records(count)
    frame = pd.DataFrame(values, columns=NAMES).map(lambda v: f"{v:g}")
    frame.insert(0, "stamp", [f"{e:%Y-%m-%d %H:%M}" for e in ends])
    return frame


def _block(part, title=TITLE, units=None, with_units=True):
    """Title, names and units lines over `part`'s records (a logger's table block)."""
    own = UNITS | (units or {})
    head = ([title] if title else []) + [",".join(part.columns)]
    if with_units:
        head.append(",".join(own.get(name, "-") for name in part.columns))
    return head + [",".join(row) for row in part.itertuples(index=False)]


def _write(path, lines):
    path.write_text("\r\n".join(lines) + "\r\n")
    return path


def _settings():
    return {"rows_before_header": 1, "rows_after_header": 1}


REORDERED = ["stamp", "sw", "co2_flux", "vpd", "t_air", "us"]


def _later(frame, order):
    for name in order:
        if name not in frame.columns:
            frame = frame.assign(**{name: "12.6"})
    return frame[order]


@pytest.mark.parametrize("order", [REORDERED, ["stamp", "batt", *NAMES]],
                         ids=["reordered", "inserted"])
def test_a_program_change_mid_file_is_read_as_its_parts(tmp_path, order):
    """The block written again on 4 June with columns reordered or a battery column
    inserted: refused before ("split the file there"); now read as the two parts written
    as files of their own are."""
    frame = _frame()
    cut = 96 * 3
    first, later = frame.iloc[:cut], _later(frame.iloc[cut:], order)
    one = _write(tmp_path / "one.csv", _block(frame.iloc[:cut])
                 + _block(later, "Logger,quill_v4,Signature,51233"))
    a = _write(tmp_path / "a.csv", _block(first))
    b = _write(tmp_path / "b.csv", _block(later, "Logger,quill_v4,Signature,51233"))
    read, report = _read(one, **_settings())
    pd.testing.assert_frame_equal(read, _read([a, b], **_settings())[0])
    assert len(read) == len(frame)
    assert any("line(s) 293" in note and "2 parts" in note for note in report.notes)
    assert report.files == (str(one),) and len(report.encodings) == 1


def test_a_mapped_column_dropped_from_a_part_is_read_missing_there(tmp_path):
    """An optional mapped column (soil temperature) absent after the change: read as
    missing from the change on, named as a column absent from a file is."""
    frame = _frame()
    frame["t_soil"] = frame["t_air"]
    cut = 96 * 3
    order = ["stamp", "co2_flux", "us", "sw", "t_air", "vpd"]
    one = _write(tmp_path / "one.csv", _block(frame.iloc[:cut])
                 + _block(frame.iloc[cut:][order], "Logger,quill_v4,Signature,1"))
    columns = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd",
               "tsoil": "t_soil"}
    read, report = _read(one, **_settings(), columns=columns)
    assert read["tsoil"].iloc[:cut].notna().all() and read["tsoil"].iloc[cut:].isna().all()
    assert any("'t_soil' is in" in w and "(lines 1-" in w for w in report.warnings)


def test_error_lines_count_the_whole_file(tmp_path):
    """A cell that is no number after the change is named by its line in the file."""
    frame = _frame()
    cut = 96 * 3
    later = _later(frame.iloc[cut:], REORDERED).copy()
    later.iloc[10, later.columns.get_loc("sw")] = "x7"
    lines = _block(frame.iloc[:cut]) + _block(later, "Logger,quill_v4,Signature,5")
    one = _write(tmp_path / "one.csv", lines)
    at = lines.index(",".join(later.iloc[10])) + 1
    with pytest.raises(InputFileError, match=rf"line {at} of"):
        _read(one, **_settings())


def test_a_restart_of_the_new_program_is_skipped_within_its_part(tmp_path):
    """The new program's block written again (a power cut) later: a restart, skipped as
    in any file, the parts read as before."""
    frame = _frame()
    a, b = 96 * 3, 96 * 6
    title = "Logger,quill_v4,Signature,5"
    one = _write(tmp_path / "one.csv", _block(frame.iloc[:a])
                 + _block(_later(frame.iloc[a:b], REORDERED), title)
                 + _block(_later(frame.iloc[b:], REORDERED), title))
    clean = _write(tmp_path / "clean.csv", _block(frame))
    read, report = _read(one, **_settings())
    pd.testing.assert_frame_equal(read, _read(clean, **_settings())[0])
    assert any("written again 1 time(s)" in note for note in report.notes)


@pytest.mark.parametrize(("title", "cut", "units", "match"), [
    ("Export of station Quill", 96 * 3, None, "not of the kind of the file's own"),
    ("Logger,quill_v4,Signature,5", 96 * 8 - 10, None, "fewer than 48"),
    ("Logger,quill_v4,Signature,5", 96 * 3, {"t_air": "degF"}, "labelled 'degC'.*'degF'"),
])
def test_a_block_that_cannot_be_trusted_is_refused(tmp_path, title, cut, units, match):
    """A title of another kind (another file appended), a part of 10 records, a mapped
    column's unit changed (°F is no °C: one [input.units] would misread the part): one
    error naming the line, no reading."""
    frame = _frame()
    later = _later(frame.iloc[cut:], REORDERED)
    one = _write(tmp_path / "one.csv", _block(frame.iloc[:cut])
                 + _block(later, title, units=units))
    with pytest.raises(InputFileError, match=match) as caught:
        _read(one, **_settings())
    assert len(str(caught.value).splitlines()) == 1


def test_program_parts_gives_each_block(tmp_path):
    """The pure function: two changes give three parts, each from its title line."""
    frame = _frame()
    lines = (_block(frame.iloc[:200]) + _block(_later(frame.iloc[200:400], REORDERED),
                                               "Logger,quill_v4,S,1")
             + _block(frame.iloc[400:], "Logger,quill_v5,S,2"))
    parts, refusal, _ = program_parts.program_parts(lines, 1, 1, ",", ("stamp",))
    assert refusal == ""
    assert [(p.first, p.header, p.units, p.end) for p in parts] == [
        (0, 1, 1, 203), (203, 204, 1, 406), (406, 407, 1, len(lines))]


@pytest.mark.parametrize("other", [False, True])
def test_a_restart_repeating_the_last_record_with_cells_missing(tmp_path, other):
    """After a restart's header, the record before it written again with sensors not yet
    warmed up (-9999 cells): refused before as a stamp of different values; now read
    once, each cell from the record that has it, as across files. A repeat with another
    value stays refused."""
    frame = _frame()
    again = frame.iloc[[199]].copy()
    again.iloc[0, 3:] = "-9999"
    if other:
        again.iloc[0, 1] = "99.5"
    lines = _block(frame.iloc[:200]) + _block(pd.concat([again, frame.iloc[200:]]))
    one = _write(tmp_path / "one.csv", lines)
    if other:
        with pytest.raises(DuplicateTimestampError):
            _read(one, **_settings(), missing=[-9999])
        return
    read, report = _read(one, **_settings(), missing=[-9999])
    clean = _write(tmp_path / "clean.csv", _block(frame))
    pd.testing.assert_frame_equal(read, _read(clean, **_settings(), missing=[-9999])[0])
    assert any("read once, each cell from the record that has it" in n for n in report.notes)
    assert report.duplicate_rows == 1


def test_fixed_widths_off_by_one_are_named_as_the_widths(tmp_path):
    """A width one character short cut every name after it: named as the widths, with
    the widths the aligned names and fields give, not as "no such column 'stam'"."""
    frame = _frame(96)
    frame["stamp"] = frame["stamp"].str.replace(r"[- :]", "", regex=True)
    widths = [18] + [12] * 5
    lines = ["".join(f"{c:>{w}}" for c, w in zip(row, widths, strict=True))
             for row in [list(frame.columns)] + frame.values.tolist()]
    path = tmp_path / "t.txt"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputFileError, match=r"cut the header inside its names.*give "
                       r"column_widths = \[18, 12, 12, 12, 12, 12\]"):
        _read(path, column_widths=[17] + [12] * 5, time_format="%Y%m%d%H%M")
    assert np.isfinite(_read(path, column_widths=widths,
                             time_format="%Y%m%d%H%M")[0]["nee"]).all()
