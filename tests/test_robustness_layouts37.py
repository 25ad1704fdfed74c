"""Layouts of the layouts37 round: a header written again after a logger restart, note
lines among the records, thousands separators, later month files without the first
file's title lines or header, German clock keys and intervals named by their length, and
the encoding named for a byte of Mac OS Roman.

Outside facts, each named beside its check: "#", "%", ";" open comment lines (shell and
Python, MATLAB, INI files; each language's reference (m)); "#N/A" and "#VALUE!" are
spreadsheet error values (Microsoft Excel documentation (m)); digits grouped in threes by
a (thin) space, the decimal marker a point or a comma (SI Brochure, 9th ed., 5.4.4 (m));
"," groups thousands beside a decimal point, "." beside a decimal comma and "'" in Swiss
formats (Unicode CLDR (m)); MEZ (mitteleuropäische Zeit) is UTC+1 (Einheiten- und
Zeitgesetz § 4 (m)); Mac OS Roman writes "°" as byte 0xA1, which Latin-1 reads as "¡"
(Apple's Mac OS Roman mapping table (m)). Everything else is invented known truth: the
records as written, compared value for value and stamp for stamp.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE, UNITS_LINE

from fluxpart.digit_grouping import ungrouped
from fluxpart.errors import ConfigError, InputFileError, MissingColumnError, TimestampError
from fluxpart.interleaved_lines import note_lines, repeated_header_blocks
from fluxpart.io import read_table
from fluxpart.stamp_places import stated_offset, stated_place


def _read(path, **options):
    settings = {"time_column": "stamp", "time_format": "%Y%m%d%H%M", "time_marks": "end"}
    settings.update(options)
    paths = [str(p) for p in path] if isinstance(path, list) else path
    return read_table(paths, columns=MAPPING, units={"vpd": "kPa"}, site=SITE, **settings)


def _assert_all(read, frame, ends):
    """Every stamp and every value as written (vpd in kPa read as hPa: x 10)."""
    starts = pd.DatetimeIndex(ends - pd.Timedelta("30min"), name="time")
    assert read.index.equals(starts.as_unit(read.index.unit))
    for name, column in (("nee", "co2"), ("rg", "sw"), ("tair", "t_air"), ("ustar", "us")):
        np.testing.assert_array_equal(read[name].to_numpy(), frame[column].to_numpy())
    np.testing.assert_allclose(read["vpd"].to_numpy(), frame["vpd"].to_numpy() * 10,
                               rtol=1e-12)


def _lines():
    frame, ends = _records()
    header, *records = frame.to_csv(index=False).splitlines()
    return frame, ends, header, records


# ------------------------------------------------------- the header written again
@pytest.mark.parametrize("before, after, block, options, skipped", [
    # refused before layouts37 ("line 102 repeats the header line ...: remove it")
    ([], [], lambda h: [h], {}, "on line 102: skipped"),
    (["Quillmoor T2"], [UNITS_LINE], lambda h: ["Quillmoor T2", h, UNITS_LINE],
     {"rows_before_header": 1, "rows_after_header": 1}, "on lines 104-106: skipped"),
    (["Quillmoor T2"], [UNITS_LINE], lambda h: ["", "Quillmoor T2", h, UNITS_LINE],
     {"rows_before_header": 1, "rows_after_header": 1}, "on lines 105-107: skipped"),
    ([], [], lambda h: ["# power cut", h], {}, "on line 103: skipped"),   # a note before
])
def test_a_header_written_again_after_a_restart_is_skipped(tmp_path, before, after, block,
                                                           options, skipped):
    frame, ends, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join(before + [header] + after + records[:100] + block(header)
                              + records[100:]) + "\n")
    read, report = _read(path, **options)
    _assert_all(read, frame, ends)
    assert any("written again 1 time(s) among the records" in w and skipped in w
               for w in report.notes)


def test_a_header_again_under_a_line_no_setting_counts_stays_refused(tmp_path):
    """A title line above the repeat where the settings count none (or a record cut short
    by the power cut): not the file's own block, so refused naming the line as before."""
    _, _, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join([header] + records[:100] + ["Quillmoor T2", header]
                              + records[100:]) + "\n")
    with pytest.raises(InputFileError, match=r"line 103 repeats the header line"):
        _read(path)
    lines = [header] + records[:100] + ["Quillmoor T3", header] + records[100:]
    assert repeated_header_blocks(lines, 0, 0, ",") == []


# ------------------------------------------------------- note lines among the records
@pytest.mark.parametrize("note, ending", [
    ("# calibration of the analyser, zero and span", "\n"),    # refused before layouts37
    ("; maintenance visit", "\r\n"), ("% power cut 02:10-03:40", "\r")])
def test_note_lines_of_one_mark_are_skipped(tmp_path, note, ending):
    frame, ends, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_bytes(ending.join([header] + records[:100] + [note] + records[100:200]
                                 + [note] + records[200:]).encode() + ending.encode())
    read, report = _read(path)
    _assert_all(read, frame, ends)
    assert any(f"2 note line(s) among the records start with {note[0]!r}" in w
               and "lines 102, 203" in w for w in report.warnings)


def test_notes_of_two_marks_and_spreadsheet_errors_are_no_file_convention(tmp_path):
    _, _, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join([header] + records[:100] + ["# calibration"] + records[100:200]
                              + ["; power cut"] + records[200:]) + "\n")
    with pytest.raises(InputFileError, match=r"line 102 .*a comment line among the records"):
        _read(path)
    # a record whose first field is a spreadsheet error is no note, and a mark a record
    # starts with is not the file's note mark
    lines = [header, "#N/A,1,2,3,4,5", records[0], "# note", records[1]]
    assert note_lines(lines, 1, ",", 6) == ([3], "#")
    assert note_lines([header, "#x,1,2,3,4,5", "# note", records[0]], 1, ",", 6) == ([], None)


# ------------------------------------------------------- thousands separators
def _grouped(value, separator, decimal):
    text = f"{value:,.1f}"
    return text.replace(",", "_").replace(".", decimal).replace("_", separator)


@pytest.mark.parametrize("separator, decimal, delimiter", [
    (",", ".", ";"), ("'", ".", ","), ("\u2009", ".", ","), (".", ",", ";")])
def test_thousands_separators_that_cannot_be_decimal_marks_are_read(tmp_path, separator,
                                                                    decimal, delimiter):
    """Refused before layouts37 ("write the numbers without digit grouping")."""
    frame, ends = _records()
    frame["sw"] = (frame["sw"] * 1.3).round(1)            # up to 1041 W m-2
    table = frame.astype(str)
    if decimal == ",":
        table = table.apply(lambda c: c.str.replace(".", ",", regex=False))
    table["sw"] = [_grouped(v, separator, decimal) if v >= 1000
                   else str(v).replace(".", decimal) for v in frame["sw"]]
    path = tmp_path / "t.csv"
    path.write_text(table.to_csv(index=False, sep=delimiter))
    read, report = _read(path, delimiter=delimiter, decimal=decimal)
    _assert_all(read, frame, ends)
    assert any("thousands separators where they cannot be a decimal mark" in w
               for w in report.warnings)


def test_a_separator_that_may_be_a_decimal_mark_is_left():
    """Whole numbers "1.034" in a column without a decimal comma of its own are 1.034 or
    1034: left to the reader's refusal; beside "12,5" in the same column they are 1034."""
    cells = pd.Series(["0", "998", "1.034"])
    assert ungrouped(cells, ",")[1] == 0
    assert list(ungrouped(pd.Series(["12,5", "1.034"]), ",")[0]) == ["12,5", "1034"]
    assert list(ungrouped(pd.Series(["0.125", "1.034.567"]), ",")[0]) == ["0.125",
                                                                          "1.034.567"]
    assert list(ungrouped(pd.Series(["5", "1.034.567"]), ",")[0]) == ["5", "1034567"]
    assert ungrouped(pd.Series(["1,5", "1,034"]), ".")[1] == 0     # "1,5" fits no grouping


# ------------------------------------------------------- later month files
@pytest.mark.parametrize("first_above, later_above, options", [
    (["Quillmoor T2"], [], {"rows_before_header": 1}),
    (["Quillmoor T2"], [UNITS_LINE], {"rows_before_header": 1, "rows_after_header": 1}),
])
def test_later_files_without_the_title_lines_are_read(tmp_path, first_above, later_above,
                                                      options):
    """Refused before layouts37 ("blocks of different lengths above their header line",
    or a units line of the first file only: "line 2 ... is a record")."""
    frame, ends, header, records = _lines()
    under = [UNITS_LINE] if options.get("rows_after_header") else []
    paths = []
    for month, start in enumerate(range(0, len(records), 160)):
        paths.append(tmp_path / f"m{month + 1}.csv")
        lines = ((first_above[:1] + [header] + under) if not month else [header])
        paths[-1].write_text("\n".join(lines + records[start:start + 160]) + "\n")
    read, report = _read(paths, **options)
    _assert_all(read, frame, ends)
    assert any("2 input file(s)" in w and "title lines written into the first file only" in w
               for w in report.notes)
    assert later_above in ([], [UNITS_LINE])


def test_later_files_without_a_header_are_read_under_the_first_files(tmp_path):
    """Refused before layouts37 ("no such column ...; 6 of these 6 names are numbers");
    a headerless file of another width stays refused."""
    frame, ends, header, records = _lines()
    paths = [tmp_path / "m1.csv", tmp_path / "m2.csv", tmp_path / "m3.csv"]
    paths[0].write_text("\n".join([header] + records[:160]) + "\n")
    paths[1].write_text("\n".join(records[160:320]) + "\n")
    paths[2].write_text("\r\n".join(records[320:]) + "\r\n")
    read, report = _read(paths)
    _assert_all(read, frame, ends)
    assert any("2 input file(s)" in w and "have no header line" in w
               for w in report.warnings)
    paths[2].write_text("\n".join(line + ",0" for line in records[320:]) + "\n")
    with pytest.raises(MissingColumnError, match=r"names are numbers"):
        _read(paths)


# ------------------------------------------------------- clock and place lines
def test_a_german_clock_key_and_an_interval_named_by_its_length_are_read(tmp_path):
    """Unread before layouts37: "Uhrzeit: MEZ" (the check of `run` then named a clock off
    in clean data, not the line) and "Date/time: start of 30-min block"."""
    assert stated_offset("Uhrzeit: MEZ") == 1.0 and stated_offset("Zeit = UTC+2") == 2.0
    assert stated_offset("Uhrzeit: 12:00") is None
    assert stated_place("Date/time: start of 30-min block") == "start"
    assert stated_place("end of each 30 min average") == "end"
    assert stated_place("start of block 3") is None
    assert stated_place("end of 30-min block 2021-06-01") is None      # a date: an event
    frame, ends, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join(["Date/time: start of 30-min block", header] + records) + "\n")
    with pytest.raises(TimestampError, match=r"line 1 .*start.*time_marks = \"end\""):
        _read(path, rows_before_header=1)


# ------------------------------------------------------- an encoding named
def test_a_byte_of_mac_os_roman_names_mac_roman_first(tmp_path):
    """Before: "set [input] encoding = "latin-1" (or "cp1252", ...)", which reads the
    units line's "°C" of a Mac OS Roman file as "¡C"."""
    _, _, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_bytes("\r".join([header, "-,umol m-2 s-1,W m-2,\u00b0C,kPa,m s-1"] + records)
                     .encode("mac_roman") + b"\r")
    with pytest.raises(InputFileError, match=r"byte 0xa1 on line 2\); set \[input\] encoding "
                                             r"= \"mac_roman\" \(its lines end in CR alone.*"
                                             r"as 'mac_roman' it reads '°C'; as 'latin-1' and "
                                             r"'cp1252' it reads '¡C'"):
        _read(path, rows_after_header=1)


# ------------------------------------------------------- [input] note_mark
@pytest.mark.parametrize("note, mark, delimiter", [
    ("; maintenance visit", ";", ";"),        # a leading empty field without the setting
    ("REM power cut", "REM", ","), ("# zero check", "#", "whitespace")])
def test_a_note_mark_setting_reads_notes_the_file_alone_cannot_tell(tmp_path, note, mark,
                                                                    delimiter):
    frame, ends, header, records = _lines()
    sep = " " if delimiter == "whitespace" else delimiter
    rows = [line.replace(",", sep) for line in [header] + records]
    path = tmp_path / "t.csv"
    path.write_text("\n".join(rows[:101] + [note] + rows[101:] + [note]) + "\n")
    if delimiter != "whitespace":
        with pytest.raises(InputFileError, match=r"line 102"):
            _read(path, delimiter=delimiter)
    read, report = _read(path, delimiter=delimiter, note_mark=mark)
    _assert_all(read, frame, ends)
    assert any(f"2 note line(s) among the records start with {mark!r}, [input] note_mark "
               "(lines 102, 483" in w for w in report.notes)


def test_a_note_mark_that_opens_records_is_refused(tmp_path):
    _, _, header, records = _lines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join([header] + records) + "\n")
    with pytest.raises(ConfigError, match=r"note_mark = \"2\""):
        _read(path, note_mark="2")
