"""Layouts of the layouts28 round: records in another notation than a delimited table
(JSON Lines, JSON, XML, an HTML table saved as .xls, an Excel 2003 XML workbook), NaN as
C's printf writes it with characters in brackets ("-nan(ind)"), a spreadsheet's owner
file ("~$...") caught by a path pattern, clocks counted from 1904 (LabVIEW seconds,
Excel's 1904 date system) and comment lines of other languages among the records.

Outside facts, each named beside its check: RFC 8259 (JSON) and JSON Lines, one object
per line (jsonlines.org (m)); W3C XML 1.0 (an XML declaration "<?xml", m); WHATWG HTML
(m); Microsoft SpreadsheetML's namespace urn:schemas-microsoft-com:office:spreadsheet
(m); ISO/IEC 9899:2011 7.21.6.1, printf writes a NaN as "[-]nan" or
"[-]nan(n-char-sequence)" (m), and the Microsoft C runtime since Visual Studio 2015
writes "-nan(ind)" (m); Excel writes "~$" + the name of an open file beside it (m);
LabVIEW and classic Mac OS count seconds from 1904-01-01, Excel's 1904 date system days
from 1904-01-01 (m), checked through Python's ``datetime``; "%" opens a MATLAB comment,
"/*" a C comment, "!" a Fortran 90 one (the languages' references (m)). Everything else
is invented known truth: the records as written.
"""

import json
from datetime import datetime, timedelta

import numpy as np
import pandas as pd
import pytest

from fluxpart._validate import leading_lines, markup_message, universal_head
from fluxpart.errors import InputFileError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd"]


def _records(count=96 * 4):
    """Invented half-hourly records ending at 00:30 on 1 June (local standard time)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = np.clip(800 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1)
    noise = np.random.default_rng(28).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.2 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd])


def _cells(values):
    return [[f"{v:g}" for v in row] for row in values]


def _write(path, stamps, cells, head="stamp", extra=()):
    lines = [",".join([head] + NAMES)]
    lines += [",".join([stamp] + row) for stamp, row in zip(stamps, cells, strict=True)]
    lines[len(lines) // 2:len(lines) // 2] = list(extra)
    path.write_text("\n".join(lines) + "\n")


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


def _stamps(ends):
    return [f"{e:%Y-%m-%d %H:%M}" for e in ends]


# ------------------------------------------------ records in another notation
def _json_lines(ends, values):
    return "\n".join(json.dumps({"stamp": s} | dict(zip(NAMES, row.tolist(), strict=True)))
                     for s, row in zip(_stamps(ends), values, strict=True)) + "\n"


def _notations(ends, values):
    """Each notation as a logger, portal or script writes it, and the word naming it."""
    objects = [{"stamp": s} | dict(zip(NAMES, row.tolist(), strict=True))
               for s, row in zip(_stamps(ends), values, strict=True)]
    tags = "\n".join(f'<r stamp="{o["stamp"]}" co2_flux="{o["co2_flux"]}"/>' for o in objects)
    cells = "\n".join("<tr>" + "".join(f"<td>{v}</td>" for v in o.values()) + "</tr>"
                      for o in objects)
    return {
        "JSON Lines": _json_lines(ends, values),                       # jsonlines.org (m)
        "JSON": json.dumps(objects),                                   # RFC 8259, one line
        "JSON,": json.dumps(objects, indent=2),                        # pretty-printed
        "XML": f'<?xml version="1.0"?>\n<records>\n{tags}\n</records>\n',   # XML 1.0 (m)
        "XML,": f"<records>\n{tags}\n</records>\n",                    # no declaration
        "HTML": f"<html><body><table>\n{cells}\n</table></body></html>",   # WHATWG (m)
        "HTML,": f"<!DOCTYPE html>\n<html>\n<table>\n{cells}\n</table>\n</html>",
        "Excel 2003 XML": ('<?xml version="1.0"?>\n<?mso-application progid="Excel.Sheet"?>\n'
                           '<Workbook xmlns="urn:schemas-microsoft-com:office:spreadsheet">'
                           "\n</Workbook>\n"),
    }


# JSON Lines and a JSON array of records are read since layouts46 (test_table_formats.py)
@pytest.mark.parametrize("kind", ["XML", "XML,", "HTML", "HTML,", "Excel 2003 XML"])
def test_records_in_another_notation_are_named(tmp_path, kind):
    """Read as a table, each was refused for a cause it does not have (a changed header,
    a header without records, "set delimiter = whitespace", a tag as the only column);
    now one line names the notation and the fix."""
    ends, values = _records(96)
    path = tmp_path / "mast.xls"
    path.write_text(_notations(ends, values)[kind])
    with pytest.raises(InputFileError) as caught:
        _read(path)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"holds {kind.rstrip(',')}" in message or (
        kind.startswith("HTML") and "holds an HTML page or table" in message) or (
        kind.startswith("Excel") and "holds an Excel 2003 XML workbook" in message)
    assert "not a delimited text table" in message


def test_json_lines_below_a_title_are_named(tmp_path):
    """The line judged is the header line: a title above it (rows_before_header) is
    skipped as the reader skips it."""
    ends, values = _records(96)
    path = tmp_path / "mast.jsonl"
    path.write_text("Invented tower export\n" + _json_lines(ends, values))
    with pytest.raises(InputFileError, match="holds JSON Lines"):
        _read(path, rows_before_header=1)


@pytest.mark.parametrize("header", [
    "stamp,co2_flux,us,sw,t_air,vpd",
    "<stamp>,<co2_flux>,<us>,<sw>,<t_air>,<vpd>",        # names in angle brackets between commas
    "[stamp],[co2_flux],[us],[sw],[t_air],[vpd]",        # names in square brackets
    "{stamp},{co2_flux}",                             # braces, not a JSON object
    "logger_stamp;co2_flux [umol m-2 s-1];Rg [W/m2]",
])
def test_table_headers_are_not_taken_for_markup(header):
    """A delimited header whose names hold brackets is no JSON (RFC 8259 needs quoted
    keys) and no XML (text between the tags): kept behaviour, read as a table."""
    assert markup_message(header + "\n2021-06-01 00:30,1,2\n", "mast.csv") == ""


def test_a_table_with_brackets_in_names_reads_as_before(tmp_path):
    """Known truth: names in angle brackets read as written."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    lines = ["<stamp>,<co2_flux>,<us>,<sw>,<t_air>,<vpd>"]
    lines += [",".join([s] + row) for s, row in zip(_stamps(ends), _cells(values), strict=True)]
    path.write_text("\n".join(lines) + "\n")
    frame, _ = _read(path, time_column="<stamp>",
                     columns={k: f"<{v}>" for k, v in MAPPING.items()})
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


# ------------------------------------------------ NaN with characters in brackets
@pytest.mark.parametrize("cell", ["-nan(ind)", "nan(ind)", "nan(snan)", "-NAN(IND)",
                                  "nan(0x7ff8)", "nan()"])
def test_nan_with_characters_in_brackets_reads_as_no_value(tmp_path, cell):
    """ISO C 7.21.6.1 (m): printf writes a NaN as "[-]nan(n-char-sequence)"; the
    Microsoft C runtime since 2015 writes "-nan(ind)" (m). Refused before with "add it
    to [input] missing"; now no value, the other values as written (known truth)."""
    ends, values = _records(96)
    cells = _cells(values)
    for row in (5, 40, 77):
        cells[row][3] = cell
    path = tmp_path / "mast.csv"
    _write(path, _stamps(ends), cells)
    frame, _ = _read(path)
    tair = frame["tair"].to_numpy()
    assert np.isnan(tair[[5, 40, 77]]).all()
    keep = np.ones(96, bool)
    keep[[5, 40, 77]] = False
    assert np.array_equal(tair[keep], values[keep, 3])


@pytest.mark.parametrize("cell", ["nan(ind", "nan[ind]", "nan(in d)", "nano"])
def test_other_text_after_nan_is_still_refused(tmp_path, cell):
    """Only C's form (brackets closed, letters, digits and underscores within) is no
    value; anything else is named as before."""
    ends, values = _records(96)
    cells = _cells(values)
    cells[5][3] = cell
    path = tmp_path / "mast.csv"
    _write(path, _stamps(ends), cells)
    with pytest.raises(InputFileError, match="which is not a number"):
        _read(path)


# ------------------------------------------------ a spreadsheet's owner file
def test_spreadsheet_owner_file_in_a_pattern_is_named(tmp_path):
    """Excel writes "~$" + the name of a file it has open (162 bytes of who opened it,
    (m)); caught by "*.csv" it was refused as UTF-16 text with an encoding fix."""
    ends, values = _records(96 * 2)
    _write(tmp_path / "mast_a.csv", _stamps(ends[:96]), _cells(values[:96]))
    _write(tmp_path / "mast_b.csv", _stamps(ends[96:]), _cells(values[96:]))
    owner = b"\x05jdoe" + b" " * 49 + "jdoe".encode("utf-16-le") + b"\x00" * 100
    (tmp_path / "~$mast_b.csv").write_bytes(owner[:162])
    with pytest.raises(InputFileError) as caught:
        _read(sorted(tmp_path.glob("*.csv")))      # what the pattern "*.csv" lists
    message = str(caught.value)
    assert "~$mast_b.csv" in message and "owner file" in message
    assert "encoding" not in message
    # without it, the two files read as written (known truth)
    (tmp_path / "~$mast_b.csv").unlink()
    frame, _ = _read(sorted(tmp_path.glob("*.csv")))
    assert np.allclose(frame["nee"].to_numpy(), values[:, 0])


# ------------------------------------------------ clocks counted from 1904
def test_labview_seconds_name_both_epochs(tmp_path):
    """Seconds since 1904-01-01 (LabVIEW, classic Mac OS (m)) fall in Unix time's range:
    named before as Unix time only, a date in 2087; now both readings, each computed
    here by ``datetime``."""
    ends, values = _records(96)
    seconds = [int((e - datetime(1904, 1, 1)).total_seconds()) for e in ends]
    path = tmp_path / "mast.csv"
    _write(path, [str(s) for s in seconds], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    unix = datetime(1970, 1, 1) + timedelta(seconds=seconds[0])
    labview = datetime(1904, 1, 1) + timedelta(seconds=seconds[0])
    assert f"{unix:%Y-%m-%d %H:%M} UTC" in message and unix.year == 2087
    assert f"{labview:%Y-%m-%d %H:%M}" in message and "LabVIEW" in message
    assert labview == ends[0]


def test_excel_1904_days_name_both_date_systems(tmp_path):
    """Days since 1904-01-01 (Excel's 1904 date system (m)) read as the 1900 system's
    days since 1899-12-30 are four years and a day early; both are named."""
    ends, values = _records(96)
    days = [(e - datetime(1904, 1, 1)).total_seconds() / 86400 for e in ends]
    path = tmp_path / "mast.csv"
    _write(path, [f"{d:.6f}" for d in days], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    early = datetime(1899, 12, 30) + timedelta(days=days[0])
    assert f"{early:%Y-%m-%d %H:%M}" in message and "1904 date system" in message
    assert f"{ends[0]:%Y-%m-%d %H:%M}" in message


def test_unix_seconds_of_this_century_name_one_reading(tmp_path):
    """Kept behaviour: Unix seconds of 2021 read from 1904 would be 1954, before any
    logger file, so only Unix time is named."""
    ends, values = _records(96)
    utc = [int((e - pd.Timedelta(hours=1) - datetime(1970, 1, 1)).total_seconds())
           for e in ends]
    path = tmp_path / "mast.csv"
    _write(path, [str(s) for s in utc], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert "Unix time" in str(caught.value) and "1904" not in str(caught.value)


# ------------------------------------------------ comment lines of other languages
@pytest.mark.parametrize("line", ["% calibration 2021-06-02", "/* sensor swapped */",
                                  "! fan replaced"])
def test_comment_lines_of_other_languages_are_skipped_and_named(tmp_path, line):
    """"%" (MATLAB), "/*" (C) and "!" (Fortran 90) open comments (m); named before
    layouts28 as a record cut short that "may hold a value cut mid-number", then refused
    as a comment line; since layouts37 skipped (no record starts with the mark), named in
    the warnings, and every record read as written."""
    ends, values = _records(96)
    plain, path = tmp_path / "plain.csv", tmp_path / "mast.csv"
    _write(plain, _stamps(ends), _cells(values))
    _write(path, _stamps(ends), _cells(values), extra=[line])
    expected, _ = _read(plain)
    table, report = _read(path)
    pd.testing.assert_frame_equal(table, expected)
    assert any(f"line 49: {line!r}" in w and "skipped" in w for w in report.warnings)


# ------------------------------------------------ a UTC offset after each stamp
@pytest.mark.parametrize(("tail", "expected"), [
    (" (UTC+01:00)", "%Y-%m-%d %H:%M (UTC%z)"),
    (" [+01:00]", "%Y-%m-%d %H:%M [%z]"),
])
def test_utc_offset_after_each_stamp_names_the_format(tmp_path, tail, expected):
    """ISO 8601 offsets (+hh:mm, +hhmm (m)) after each stamp in words or brackets were
    refused as a bare parse failure; now the format with %z is named, and it reads the
    records as written (known truth: the site's own offset, UTC+1)."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, [s + tail for s in _stamps(ends)], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert f'time_format = "{expected}" reads every stamp' in str(caught.value)
    assert len(str(caught.value).splitlines()) == 1
    frame, _ = _read(path, time_format=expected)
    starts = pd.DatetimeIndex(ends - pd.Timedelta(minutes=30), name="time")
    pd.testing.assert_index_equal(frame.index, starts, check_exact=True, exact=False)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_offset_right_after_the_stamp_keeps_its_hint(tmp_path):
    """Kept behaviour: " GMT+0100" right after the stamp is named by the earlier hint
    ("add %z"), which the new one does not replace."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, [s + " GMT+0100" for s in _stamps(ends)], _cells(values))
    with pytest.raises(TimestampError, match="ends in a UTC offset: add %z"):
        _read(path)


# ------------------------------------------------ the Buddhist Era's years
def test_buddhist_era_years_are_refused_naming_both_readings(tmp_path):
    """The Thai solar calendar counts the Gregorian year + 543 (m): stamps of 2564 were
    read as written, the year 2564 (a leap year, so 29 February a day-long gap), without
    a word; now refused naming both years."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, [f"{e.year + 543}-{e:%m-%d %H:%M}" for e in ends], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "dated 2564" in message and "they are 2021" in message
    assert 2564 - 543 == ends[0].year


def test_years_of_this_century_are_not_taken_for_the_buddhist_era(tmp_path):
    """Kept behaviour: Gregorian stamps read as written (known truth)."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, _stamps(ends), _cells(values))
    frame, _ = _read(path)
    assert (frame.index.year == 2021).all()


# ------------------------------------------------ a byte-order mark encoded twice
def test_byte_order_mark_encoded_twice_is_dropped(tmp_path):
    """The UTF-8 byte-order mark EF BB BF (Unicode, section 23.8 (m)) read as Latin-1
    is the three characters "ï»¿"; saved again as UTF-8 they led the first name, and the
    time column was not found. Now dropped as the mark is; the records read as written
    (known truth)."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, _stamps(ends), _cells(values))
    mark = b"\xef\xbb\xbf".decode("latin-1")
    path.write_text(mark + path.read_text(), encoding="utf-8")
    frame, _ = _read(path)
    assert np.allclose(frame["nee"].to_numpy(), values[:, 0])


# ------------------------------------------------ a mark on some stamps
@pytest.mark.parametrize("mark", ["*", " B", " (2)"])
def test_marked_repeated_hour_is_named(tmp_path, mark):
    """Civil time of Europe/Berlin (the time-zone database: clocks go back from 03:00
    CEST to 02:00 CET on 31 October 2021 (m)); the repeated hour's second pass marked.
    Refused before as a bare parse failure; now the mark is named, and without it the
    file reads in record order (known truth: the records' UTC instants)."""
    ends, values = _records(96 * 2)
    ends = ends + (pd.Timestamp("2021-10-30 00:30") - ends[0])
    civil = (ends.tz_localize("Etc/GMT-1").tz_convert("Europe/Berlin")
             .strftime("%Y-%m-%d %H:%M"))
    stamps = list(civil)
    seen = set()
    marked = []
    for i, s in enumerate(stamps):
        if s in seen:
            marked.append(i)
        seen.add(s)
    assert len(marked) == 2
    path = tmp_path / "mast.csv"
    _write(path, [s + mark if i in marked else s for i, s in enumerate(stamps)],
           _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path, time_zone="Europe/Berlin")
    message = str(caught.value)
    assert "end in a mark the other stamps lack" in message and repr(mark.strip()) in message
    _write(path, stamps, _cells(values))
    frame, _ = _read(path, time_zone="Europe/Berlin")
    starts = pd.DatetimeIndex(ends - pd.Timedelta(minutes=30), name="time")
    pd.testing.assert_index_equal(frame.index, starts, exact=False)


# ------------------------------------------------ records on one line
@pytest.mark.parametrize("ending", ["", "\n"])
def test_records_on_one_line_are_refused_at_once(tmp_path, ending):
    """A file whose line breaks were lost is one line of every field: more than the
    16,384 columns a spreadsheet holds (Excel's specifications and limits (m)). Read as a
    header of that many names, `check` took minutes before "a header but no records";
    now one line names the field count at once (known truth: 500 records of 6
    fields, 3,006 fields, under the limit, stay a header with no records)."""
    ends, values = _records(96 * 30)
    lines = [",".join(["stamp"] + NAMES)]
    lines += [",".join([s] + row) for s, row in zip(_stamps(ends), _cells(values),
                                                     strict=True)]
    path = tmp_path / "mast.csv"
    path.write_text(",".join(lines) + ending)
    with pytest.raises(InputFileError) as caught:
        _read(path)
    message = str(caught.value)
    assert f"holds {6 * len(lines):,} fields" in message and "0 line(s) follow" in message
    path.write_text(",".join(lines[:501]) + ending)
    with pytest.raises(InputFileError, match="has a header but no records"):
        _read(path)


@pytest.mark.parametrize("newline", ["\r", "\r\n"])
def test_lines_ended_by_cr_are_no_one_line(tmp_path, newline):
    """Kept behaviour: a file whose lines end in CR alone (classic Mac OS) or CRLF
    (Windows) has as many lines as records (Unicode line breaks, common practice), not
    one wide header (known truth: the records as written)."""
    ends, values = _records(96 * 30)
    lines = [",".join(["stamp"] + NAMES)]
    lines += [",".join([s] + row) for s, row in zip(_stamps(ends), _cells(values),
                                                     strict=True)]
    path = tmp_path / "mast.csv"
    path.write_bytes((newline.join(lines) + newline).encode())
    frame, _ = _read(path)
    assert np.allclose(frame["nee"].to_numpy(), values[:, 0])


@pytest.mark.parametrize("above", ['{"station": "Q1", "logger": 2}', "<Station Q1>",
                                   "<metadata/>"])
def test_a_preamble_line_of_json_or_tags_above_a_table_is_no_markup(tmp_path, above):
    """Kept behaviour: one line of JSON or tags above a table's header is a preamble
    (rows_before_header's matter): the refusal names that setting, not JSON or XML, and
    with it the records read as written (known truth)."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, _stamps(ends), _cells(values))
    path.write_text(above + "\n" + path.read_text())
    assert markup_message(path.read_text(), path) == ""
    with pytest.raises(Exception, match="rows_before_header = 1"):
        _read(path)
    frame, _ = _read(path, rows_before_header=1)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_the_head_of_a_text_reads_as_the_whole_texts_first_lines():
    """The reader's head-line checks read `universal_head` instead of the whole text
    (round speed53): its lines must be those Python's ``io.StringIO(text, newline=None)``
    reads from the whole text (universal newlines: "\\n", "\\r", "\\r\\n" end a line;
    the Python documentation of io.StringIO and of universal newlines (m)), for every
    mix of line ends, a CR LF split or not at the cut, and texts with fewer lines."""
    import io
    import itertools

    rng = np.random.default_rng(53)
    alphabet = np.array(list("ab,\r\n \u2028\x0c"))
    for size in rng.integers(0, 40, 400):
        text = "".join(rng.choice(alphabet, size))
        for lines in range(6):
            whole = list(itertools.islice(io.StringIO(text, newline=None), lines))
            head = universal_head(text, lines)
            assert text.startswith(head)
            assert list(io.StringIO(head, newline=None)) == whole, (text, lines)
    # a CR LF is one line end: the cut never falls between its two characters
    assert universal_head("h\r\nx\r\ny", 1) == "h\r\n"
    assert universal_head("h\rx\ny", 2) == "h\rx\n"
    assert universal_head("h\nx", 5) == "h\nx"


def test_the_header_row_read_from_the_head_lines_is_the_whole_texts():
    """`io._header_text` (round speed57) gives the header read only the text through the
    header line where that text holds no quote and the line is not blank: pandas' ``read_csv``
    (``header=None, nrows=1, skiprows=k``, as `_read_text` calls it) must then read the
    same row, or fail alike, as from the whole text (pandas' own parser is the
    reference), for random texts of LF and CR LF line ends with quotes, blank lines and
    rows of other lengths."""
    import io

    from fluxpart.io import _header_text

    def header(text, skip, sep):
        try:
            return pd.read_csv(io.StringIO(text), header=None, nrows=1, skiprows=skip,
                               dtype=str, keep_default_na=False, na_filter=False,
                               sep=sep).iloc[0].tolist()
        except Exception as error:     # the same failure from both texts
            return type(error).__name__, str(error)

    rng = np.random.default_rng(57)
    pieces = np.array(["a", "b", ",", " ", '"', "\n", "\r\n", "\n\n", "ab,c"])
    for size in rng.integers(1, 30, 150):
        text = "".join(rng.choice(pieces, size))
        for skip in range(3):
            sep = ["," , r"\s+"][skip % 2]
            head = _header_text(text, skip)
            assert text.startswith(head)
            assert header(head, skip, sep) == header(text, skip, sep), (text, skip)
    assert _header_text('t\nx,y\n1,2\n', 1) == 't\nx,y\n'
    assert _header_text('t\n"x\ny",z\n1,2\n', 1) == 't\n"x\ny",z\n1,2\n'


def test_the_leading_lines_of_a_text_are_its_first_split_lines():
    """`leading_lines` (round speed53) splits only the start of a text: its lines must be
    the first lines of Python's ``str.splitlines`` of the whole text (its line boundaries:
    LF, CR, CR LF, VT, FF, FS, GS, RS, NEL, LS, PS; the Python documentation of
    str.splitlines (m)), a CR LF at the cut taken whole."""
    rng = np.random.default_rng(530)
    alphabet = np.array(list("ab,\t \r\n\v\f\x1c\x1d\x1e\x85\u2028\u2029"))
    for size in rng.integers(0, 40, 400):
        text = "".join(rng.choice(alphabet, size))
        for lines in range(6):
            assert leading_lines(text, lines) == text.splitlines()[:lines], (text, lines)
    assert leading_lines("h\r\nx\r\ny", 2) == ["h", "x"]
    assert leading_lines("h\u2028x", 9) == ["h", "x"]
