"""Layouts of the layouts52 round: cells written as a spreadsheet's text formula
(``="0.329"``), a picture packed beside the table in a zip, a tar archive of a series of
tables with one header, counts of time read from a wrong reference date, and month
abbreviations in Italian, Dutch and Portuguese.

Outside facts, each named beside its check: a CSV field is quoted only where a double
quote opens it (RFC 4180, section 2, rules 5-7 (m)), which Python's ``csv`` module
follows, so ``="0.329"`` is no quoted field; a formula opens with "=" and a string
literal stands in double quotes (ECMA-376 Part 1, 18.17 (m)); the ``="..."`` cell that
keeps a spreadsheet from reformatting text is common practice; zip and tar archives are
written by Python's ``zipfile`` and ``tarfile`` (the general-purpose references); a PNG
file opens with its 8-byte signature (PNG specification, 5.2 (m)); spreadsheets count
days from 1899-12-30 (Microsoft, "Date systems in Excel" (m)), checked with Python's
``datetime``. Everything else is
invented known truth: the records as written.
"""
import csv
import io
import tarfile
import zipfile
from datetime import datetime

import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.counted_time import latest_record, reference_mismatch
from fluxpart.errors import FluxpartError
from fluxpart.formula_cells import without_text_formulas
from fluxpart.io import read_table
from fluxpart.month_words import english_months as english_months_of


def _clean(tmp_path, records):
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    return _read(tmp_path / "clean.csv")[0]


@pytest.mark.parametrize("sep, stamps_only", [(",", False), (";", False), (",", True)])
def test_cells_written_as_text_formulas_are_read_as_their_text(tmp_path, sep, stamps_only):
    """Refused before: every stamp "does not match time_format" ('="2021-06-01 00:30"').
    Now each cell ="..." is read as the text between its quotes, with one note."""
    _, records = _tower()
    lines = records.to_csv(index=False, sep=sep).splitlines()
    written = [lines[0]] + [
        sep.join(f'="{cell}"' if not stamps_only or i == 0 else cell
                 for i, cell in enumerate(line.split(sep))) for line in lines[1:]]
    (tmp_path / "formulas.csv").write_text("\n".join(written) + "\n")
    frame, report = _read(tmp_path / "formulas.csv", delimiter=sep)
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert sum("spreadsheet's text formula" in n for n in report.notes) == 1
    assert f"{len(records)} line(s) hold cells" in " ".join(report.notes)


def test_only_whole_text_formula_fields_are_unwrapped():
    """The result parses with Python's csv module (RFC 4180 (m)) to the formulas' texts;
    another formula, or a formula inside a quoted field, is left as written."""
    text = 'a,b,c\n="1.5",="x, y",=A2*2\n"say ="hi"",="a"&"b",2\r\n="3",4,5'
    found, count = without_text_formulas(text)
    rows = list(csv.reader(io.StringIO(found)))
    assert rows[1] == ["1.5", "x, y", "=A2*2"]
    assert rows[2][1] == '="a"&"b"'
    assert rows[3] == ["3", "4", "5"]
    assert count == 2
    assert without_text_formulas("a,b\n1,2\n") == ("a,b\n1,2\n", 0)


def test_a_zip_of_the_table_and_its_plot_reads_the_table(tmp_path):
    """Refused before as "a zip archive holding 2 file(s)": a picture holds no table; a
    zip of pictures only stays refused as holding no table."""
    _, records = _tower()
    png = b"\x89PNG\r\n\x1a\n" + bytes(64)       # the PNG signature (PNG spec. 5.2 (m))
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("tower.csv", records.to_csv(index=False))
        archive.writestr("nee_plot.png", png)
        archive.writestr("site photo.JPG", png)
    (tmp_path / "t.zip").write_bytes(buffer.getvalue())
    pd.testing.assert_frame_equal(_read(tmp_path / "t.zip")[0], _clean(tmp_path, records))
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("nee_plot.png", png)
        archive.writestr("rg_plot.png", png)
    (tmp_path / "plots.zip").write_bytes(buffer.getvalue())
    with pytest.raises(FluxpartError, match="documents only .* or a picture"):
        _read(tmp_path / "plots.zip")


def _tar(members, mode="w:gz"):
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode=mode) as archive:
        for name, data in members:
            info = tarfile.TarInfo(name)
            info.size = len(data)
            archive.addfile(info, io.BytesIO(data))
    return buffer.getvalue()


def test_a_tar_of_a_series_of_tables_is_read_one_after_another(tmp_path):
    """Ten daily files in a .tar.gz, one header each, written out of name order (day10
    first): read in the order of their names, digits as numbers, with one note; the
    same as the records in one file."""
    _, records = _tower()
    days = [records.iloc[i * 48:(i + 1) * 48] for i in range(10)]
    members = [(f"day{i + 1}.csv", part.to_csv(index=False).encode())
               for i, part in enumerate(days)]
    (tmp_path / "t.tar.gz").write_bytes(_tar(members[::-1]))
    frame, report = _read(tmp_path / "t.tar.gz")
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, records))
    assert sum("a tar archive of 10 tables" in n and "'day1.csv' to 'day10.csv'" in n
               for n in report.notes) == 1


def test_a_tar_of_tables_with_other_headers_stays_refused(tmp_path):
    """Two files whose first lines differ (another column order) are no series of one
    layout: refused naming the files, as before."""
    _, records = _tower()
    first = records.iloc[:240].to_csv(index=False).encode()
    second = records.iloc[240:, ::-1].to_csv(index=False).encode()
    (tmp_path / "t.tar").write_bytes(_tar([("part1.csv", first), ("part2.csv", second)],
                                          "w"))
    with pytest.raises(FluxpartError, match=r"tar archive holding 2 file\(s\) .*unpack it "
                       r"\(read one after another where every file opens with the same "
                       r"line: 'part2.csv' opens with"):
        _read(tmp_path / "t.tar")


def test_counts_read_from_a_wrong_reference_date_are_refused_naming_the_right_one(tmp_path):
    """Spreadsheet day numbers of the 1900 system (44348 is 2021-06-01, Microsoft, "Date
    systems in Excel" (m); checked here with Python's datetime, the general-purpose
    reference) under "days since 1970-01-01" were read as 2091 without a word; now
    refused naming the reading and the setting that places them."""
    _, records = _tower()
    stamps = pd.to_datetime(records["stamp"])
    serial = (stamps - datetime(1899, 12, 30)) / pd.Timedelta("1D")
    assert serial.iloc[0] == (datetime(2021, 6, 1, 0, 30) - datetime(1899, 12, 30)).days \
        + 0.5 / 24 == 44348 + 0.5 / 24
    records = records.assign(stamp=[f"{v:.6f}" for v in serial])
    (tmp_path / "serial.csv").write_text(records.to_csv(index=False))
    with pytest.raises(FluxpartError, match=r"counted from 1970-01-01 the records run from "
                       r"2091-06-0\d to 2091-06-1\d, after \d{4}-\d\d-\d\d, ten years past this run's date: "
                       r"a tower records no future.*from 1899-12-30 they run "
                       r"from 2021-06-01 .*time_format = \"days since 1899-12-30\""):
        read_table(tmp_path / "serial.csv", columns=MAPPING, time_column="stamp",
                   time_format="days since 1970-01-01", time_marks="end")
    frame, _ = read_table(tmp_path / "serial.csv", columns=MAPPING, time_column="stamp",
                          time_format="days since 1899-12-30", time_marks="end")
    pd.testing.assert_frame_equal(frame, _clean(tmp_path, _tower()[1]))


def test_a_count_placing_records_after_the_latest_date_names_the_reference():
    """Seconds since 1904-01-01 (classic Mac OS and LabVIEW time (m)) of 2021-01-01 00:00
    read as Unix time land in 2087; a count of this century's records from its own
    reference passes."""
    since_1904 = int((datetime(2021, 1, 1) - datetime(1904, 1, 1)).total_seconds())
    text = pd.Series([str(since_1904 + 1800 * i) for i in range(4)])
    said = reference_mismatch(text, "seconds since 1970-01-01 00:00:00 UTC")
    assert said.startswith("counted from 1970-01-01 the records run from 2087-01-0")
    assert "from 1904-01-01 they run from 2021-01-01 to 2021-01-01" in said
    assert reference_mismatch(text, "seconds since 1904-01-01 00:00:00 UTC") == ""
    # one count past it among Unix times of 2021 (a typo) is left to the stamp checks,
    # which name its line
    unix = int((datetime(2021, 1, 1) - datetime(1970, 1, 1)).total_seconds())
    typo = pd.Series([str(unix + 1800 * i) for i in range(4)] + ["9e10"])
    assert reference_mismatch(typo, "seconds since 1970-01-01 00:00:00 UTC") == ""
    assert latest_record() > pd.Timestamp("2036-12-05")


@pytest.mark.parametrize("language, words", [
    # the abbreviations of the glibc locales it_IT, nl_NL and pt_PT (m)
    ("Italian", ["gen", "feb", "mar", "apr", "mag", "giu", "lug", "ago", "set", "ott", "nov",
                 "dic"]),
    ("Dutch", ["jan", "feb", "mrt", "apr", "mei", "jun", "jul", "aug", "sep", "okt", "nov",
               "dec"]),
    ("Portuguese", ["jan", "fev", "mar", "abr", "mai", "jun", "jul", "ago", "set", "out",
                    "nov", "dez"])])
def test_italian_dutch_and_portuguese_month_words_are_read(tmp_path, language, words):
    """Refused before, naming the word ('gen', 'mrt', 'out'); each month's stamps now read
    as their English abbreviation reads (Python's strptime under %b, the C locale)."""
    english_months = [datetime(2021, m, 1).strftime("%b") for m in range(1, 13)]
    stamps = [f"{d:02d}-{w}-2021 {h:02d}:30" for d, w, h in zip(
        range(1, 13), words, range(12), strict=True)]
    read = english_months_of(pd.Series(stamps), "%d-%b-%Y %H:%M")
    assert [s.split("-")[1] for s in read] == english_months, language
    assert [datetime.strptime(s, "%d-%b-%Y %H:%M").month for s in read] == list(range(1, 13))
