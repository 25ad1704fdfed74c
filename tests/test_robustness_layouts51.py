"""Layouts of the layouts51 round: a units row in parentheses under the header, and a
header line written with another field separator than its records.

Outside facts, each named beside its check: accounting formats write a negative number in
parentheses, "(1.5)" for -1.5 (common practice), so a parenthesised number is no unit;
a header typed again by hand or pasted from another file keeps that file's separator
(common practice); Python's ``str.split`` without an argument splits on runs of blanks
and tabs (Python documentation, str.split). Everything else is invented known truth: the
records as written.
"""
import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.errors import FluxpartError, ImplausibleValueError
from fluxpart.header_cells import bracketed_units_row, header_separator
from fluxpart.io import read_table
from fluxpart.quoted_lines import single_quoted


def _clean(tmp_path, records):
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    return _read(tmp_path / "clean.csv")[0]


def test_a_units_row_in_parentheses_is_read_as_one(tmp_path):
    """Refused before ("has stamp '(-)' ... set rows_after_header = 1"); now read as the
    bracket form is since layouts47, with a note naming the line."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines()
    units = ",".join(["(-)", *(f"({u})" for u in ["umol m-2 s-1", "m s-1", "W m-2",
                                                    "degC", "hPa"])][:len(records.columns)])
    (tmp_path / "units.csv").write_text("\n".join([lines[0], units] + lines[1:]) + "\n")
    frame, report = _read(tmp_path / "units.csv")
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert any("line 2 under the header holds units in parentheses" in n
               for n in report.notes)
    # an accountant's negatives "(1.5)" are numbers, no units (common practice)
    assert bracketed_units_row("a,b,c\n(1.5),(2),(3)\n1,2,3\n", 0, ",") == ""
    assert bracketed_units_row("a,b,c\n[-],[m],[s]\n1,2,3\n", 0, ",") == "[]"


@pytest.mark.parametrize("header_sep, sep, delimiter", [
    (",", ";", ";"), ("|", "\t", "\t"), (";", ",", ",")])
def test_a_header_in_another_separator_than_its_records_is_read(tmp_path, header_sep, sep,
                                                                delimiter):
    """Refused before ("line 2 has 6 fields where the header has 1"); now each name is
    read over its field, with a note naming both separators."""
    _, records = _tower()
    lines = records.to_csv(index=False, sep=sep).splitlines()
    header = lines[0].replace(sep, header_sep)
    (tmp_path / "mixed.csv").write_text("\n".join([header] + lines[1:]) + "\n")
    frame, report = _read(tmp_path / "mixed.csv", delimiter=delimiter)
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert sum("the header (line 1) is written with" in n for n in report.notes) == 1


def test_a_header_in_another_separator_missing_a_name_stays_refused(tmp_path):
    """A header of one name fewer than the records' fields under any separator tells no
    place for each name: refused as before, naming the line."""
    _, records = _tower()
    lines = records.to_csv(index=False, sep=";").splitlines()
    header = ",".join(lines[0].split(";")[:-1])
    (tmp_path / "short.csv").write_text("\n".join([header] + lines[1:]) + "\n")
    with pytest.raises(FluxpartError, match="line 2 has 6 fields where the header has 1"):
        _read(tmp_path / "short.csv", delimiter=";")
    # two other separators fitting alike tell no intent (no guess between them); a tab
    # read as a tab and as blanks gives one reading (review73)
    assert header_separator("a,b|c\n1;2\n", 0, 0, ";") == ""
    assert header_separator("a,b\tc,d\n1;2\n", 0, 0, ";") == "\t"
    assert header_separator("a,b\n1;2\n", 0, 0, ";") == ","


def test_single_quotes_are_read_as_quotes_only_where_every_cell_has_them():
    """Every cell of the header and records in apostrophes: read so (the layouts35 test
    reads such a file); one cell without them, or a double quote (RFC 4180's quote (m))
    anywhere, and the file is left to the refusals that name the quotes."""
    assert single_quoted(["'a','b'", "'1','2'", "'3','4'"], ",", 0, 1)
    assert not single_quoted(["'a','b'", "'1',2", "'3','4'"], ",", 0, 1)
    assert not single_quoted(["'a','b'", "'1','\"2'"], ",", 0, 1)


def test_a_title_line_splitting_like_a_header_is_no_header():
    """A title set as the header by a wrong rows_before_header ("Quillmoor; logger 3"
    over two-field lines) does not name the time column: left to the refusal that names
    the header's line (invented known truth)."""
    text = "Quillmoor; logger 3\nstamp,nee\n2021-01-01 00:30,1.5\n"
    assert header_separator(text, 0, 0, ",", "stamp") == ""
    assert header_separator("stamp;nee\n2021-01-01 00:30,1.5\n", 0, 0, ",", "stamp") == ";"


@pytest.mark.parametrize("later, line", [
    # a spreadsheet's text mark opening a cell, never closed: the parser's last line was
    # taken for the quote's, dropped, and the file read again line by line (481 notes)
    ({300: "'"}, 301),
    # closed by an apostrophe 99 lines on ("rock'n"): the records between were one cell
    ({300: "'", 399: "rock'n "}, 301)])
def test_a_quote_opened_in_a_later_record_of_a_single_quoted_file_is_named(tmp_path, later,
                                                                           line):
    """review73: a file whose header and first 20 records are in single quotes is read with
    ``'`` as its quote character; an apostrophe opening a cell of a later unquoted record
    ran on over the lines after it. Python's csv module (strict) names the line that ends
    inside a quoted cell (Python documentation, csv); the file is refused naming it."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines()
    lines[:21] = [",".join(f"'{cell}'" for cell in row.split(",")) for row in lines[:21]]
    for at, mark in later.items():
        cells = lines[at].split(",")
        cells[2] = mark + cells[2]
        lines[at] = ",".join(cells)
    (tmp_path / "q.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(FluxpartError, match=rf"line {line} \(.*\) opens a (single )?quote \('\)"):
        _read(tmp_path / "q.csv")


def test_a_unit_in_parentheses_or_brackets_is_judged_against_the_unit_read(tmp_path):
    """review73: "(kPa)" under a VPD read in hPa, the default, went unjudged where the
    same row without parentheses is named (1 kPa = 10 hPa, SI); and "[]" over the stamp
    column, a units row since layouts47, was refused by the parentheses' rule."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines()
    for units, marks in [("(-),(umol m-2 s-1),(m s-1),(W m-2),(degC),(kPa)", "()"),
                         ("[],[umol m-2 s-1],[m s-1],[W m-2],[degC],[kPa]", "[]")]:
        (tmp_path / "u.csv").write_text("\n".join([lines[0], units] + lines[1:]) + "\n")
        assert bracketed_units_row((tmp_path / "u.csv").read_text(), 0, ",") == marks
        # since round unitsrow the row's kPa is read where [input.units] names no VPD
        # unit; the hPa values then exceed saturation and are refused, naming the row
        with pytest.raises(ImplausibleValueError, match=r"look like 'hPa'.*read in 'kPa' "
                                                        r"as the file's units row writes"):
            _read(tmp_path / "u.csv")


def test_a_header_in_single_blanks_tells_no_names(tmp_path):
    """review73: a tab file whose header was typed with single blanks, one name holding a
    blank ("wind dir") and the last field (a flag) unnamed, split into as many names as
    fields: read with every name after "wind" one field off (rg over the air
    temperatures). A single blank may stand within a name, so blanks separate names only
    as runs of two or more; else refused, naming the cause (invented known truth)."""
    _, records = _tower()
    records = records.assign(stamp=records["stamp"].str.replace(" ", "T"))
    records.insert(3, "wind dir", 180)
    records["flag"] = 0
    lines = records.to_csv(index=False, sep="\t").splitlines()
    header = lines[0].replace("\t", " ").removesuffix(" flag")
    (tmp_path / "w.dat").write_text("\n".join([header] + lines[1:]) + "\n")
    with pytest.raises(FluxpartError, match="holds 8 names if split at its single blanks"):
        read_table(tmp_path / "w.dat", columns=MAPPING, time_column="stamp",
                   time_format="%Y-%m-%dT%H:%M", time_marks="end", delimiter="\t")
    # the same names apart by runs of blanks (tabs an editor turned into blanks) are read
    runs = lines[0].replace("\t", "   ")
    assert header_separator("\n".join([runs] + lines[1:]), 0, 0, "\t", "stamp") == \
        "whitespace"


def test_a_units_row_under_a_header_in_another_separator_is_read_as_one(tmp_path):
    """review73: the units row was judged before the header's separator, against a
    header of one cell, and then read as a record (refused on its stamp "(-)"); now both
    readings are taken, each noted (invented known truth: the records as written)."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines()
    units = "(-),(umol m-2 s-1),(m s-1),(W m-2),(degC),(hPa)"
    (tmp_path / "h.csv").write_text("\n".join([lines[0].replace(",", ";"), units]
                                              + lines[1:]) + "\n")
    frame, report = _read(tmp_path / "h.csv")
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert len(report.notes) == 2
    assert "the header (line 1) is written with semicolons" in report.notes[0]
    assert "line 2 under the header holds units in parentheses" in report.notes[1]


def test_decimal_commas_within_single_quotes_of_a_comma_file_are_read(tmp_path):
    """review73: "'2,022'" in a comma file of decimal commas was named unquoted ("must be
    quoted ... and here it is not"); a quoted field may hold the delimiter (RFC 4180,
    section 2 (m)), so every cell in single quotes is read so, the commas inside them
    decimal marks (invented known truth: the records as written)."""
    _, records = _tower()
    lines = records.to_csv(index=False, sep=";", decimal=",").splitlines()
    (tmp_path / "d.csv").write_text("\n".join(
        ",".join(f"'{cell}'" for cell in line.split(";")) for line in lines) + "\n")
    frame, report = _read(tmp_path / "d.csv", decimal=",")
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert any("wrapped in single quotes" in note for note in report.notes)
    assert not single_quoted(["'a','b'", "'1,5',2"], ",", 0, 1)


def test_a_header_in_commas_over_records_with_decimal_commas_is_named(tmp_path):
    """review73: a semicolon file of decimal commas whose header is in commas stays
    refused (its records hold commas of their own), now naming that cause instead of "is
    a column name missing in the header?" (invented known truth: the records as written)."""
    _, records = _tower()
    lines = records.to_csv(index=False, sep=";", decimal=",").splitlines()
    (tmp_path / "c.csv").write_text("\n".join([lines[0].replace(";", ",")] + lines[1:]) + "\n")
    with pytest.raises(FluxpartError, match="holds 6 names if split at its commas.*hold "
                                            "commas too"):
        _read(tmp_path / "c.csv", delimiter=";", decimal=",")
