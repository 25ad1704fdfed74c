"""Layouts of the layouts20 round: files saved from spreadsheets and database exports (a
summary line under the records, a header written again in capitals or in quotes, a
header naming a column the records do not hold).

Outside facts, each named beside its check: spreadsheets write a column's statistics in a
row under its values (AVERAGE, SUM; common practice); SQL identifiers are case-insensitive
unless quoted (ISO/IEC 9075 (m)), so a database export may write its header in capitals;
RFC 4180, section 2 (m): a field may be enclosed in double quotes or not, the same field
either way, and each line should hold the same number of fields as the header.
"""

import csv

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower as _tower_records

from fluxpart.errors import (
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    TimestampError,
)
from fluxpart.io import read_table

MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}


def _tower(periods=48 * 10, seed=6):
    """Invented half-hourly tower records (known truth for the reader): round
    layouts18's, ten days."""
    return _tower_records(periods, seed)


def _read(paths, columns=MAPPING, **kwargs):
    return read_table(paths, columns=columns, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", **kwargs)


@pytest.mark.parametrize("words", [["mean"], ["Total"], ["AVERAGE", "SUM"]])
def test_summary_lines_under_the_records_are_named(tmp_path, words):
    """A table saved from a spreadsheet with its statistics under the records (common
    practice): the words in the stamp column were "a stamp that does not parse", naming
    no cause; layouts20 named them as a summary and refused the file; since layouts38
    they are dropped with a warning naming them, the records read as without them."""
    _, records = _tower()
    text = records.to_csv(index=False)
    (tmp_path / "plain.csv").write_text(text)
    expected, _ = _read(tmp_path / "plain.csv")
    text += "".join(f"{word},1.5,0.3,400.0,18.0,5.0\n" for word in words)
    (tmp_path / "sheet.csv").write_text(text)
    table, report = _read(tmp_path / "sheet.csv")
    pd.testing.assert_frame_equal(table, expected)
    message = next(w for w in report.notes if "statistics under the records" in w)
    assert (f"its last {len(words)} lines ({len(records) + 2} to" if len(words) > 1 else
            f"its last line ({len(records) + 2}: ") in message
    assert all(repr(word) in message for word in words)


def test_a_word_among_the_records_is_no_summary(tmp_path):
    """A word in the middle of the records is not a summary under them: not named as
    one (the same refusal as before)."""
    _, records = _tower()
    frame = records.astype(object)
    frame.loc[100, "stamp"] = "mean"
    (tmp_path / "mid.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "mid.csv")
    assert "line 102" in str(caught.value)
    assert "summary" not in str(caught.value)


@pytest.mark.parametrize("written", ["upper", "quoted"])
def test_a_header_written_again_in_capitals_or_quotes_is_a_repeated_header(tmp_path,
                                                                          written):
    """The header line written again among the records in capitals (SQL names are
    case-insensitive, ISO/IEC 9075 (m)) or with its names quoted (the same fields, RFC
    4180 (m)): named "a header line with other names or another order" (quoted), or as a
    stamp 'STAMP' that does not parse (capitals). Now named as the header repeated."""
    _, records = _tower()
    header, *lines = records.to_csv(index=False).splitlines()
    again = (header.upper() if written == "upper"
             else ",".join(f'"{name}"' for name in header.split(",")))
    text = "\n".join([header, *lines[:200], again, *lines[200:]]) + "\n"
    (tmp_path / "joined.csv").write_text(text)
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "joined.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "line 202 repeats the header line" in message
    assert "other names" not in message


def test_a_header_of_other_names_is_still_named_as_changed(tmp_path):
    """A header line with a column renamed mid-file: refused as "a header line with other
    names" until layouts54, which reads the two parts each by its own header (a logger
    program change) and joins them as files; the mapped column renamed between them is
    refused as between files, naming both parts' lines and its other name, which
    [input.other_names] then reads (known truth: the records as written)."""
    _, records = _tower()
    header, *lines = records.to_csv(index=False).splitlines()
    text = "\n".join([header, *lines[:200], header.replace("vpd", "vpd_hpa"),
                      *lines[200:]]) + "\n"
    (tmp_path / "changed.csv").write_text(text)
    (tmp_path / "clean.csv").write_text("\n".join([header, *lines]) + "\n")
    with pytest.raises(MissingColumnError, match=r"changed.csv \(lines 1-201\)' but not in "
                       r"'.*changed.csv \(lines 202-.*did you mean 'vpd_hpa'"):
        _read(tmp_path / "changed.csv")
    frame, _ = _read(tmp_path / "changed.csv", other_names={"vpd": ["vpd_hpa"]})
    pd.testing.assert_frame_equal(frame, _read(tmp_path / "clean.csv")[0])


@pytest.mark.parametrize("where", ["end", "front"])
def test_a_header_naming_a_column_no_record_holds(tmp_path, where):
    """Every record has one field fewer than the header (RFC 4180 (m): each line should
    hold the header's number of fields). Named before as a logger program that removed a
    column mid-file, with the fix "split the file at line 2", which leaves the header
    and its records as they were. Now named as the header and the records disagreeing
    throughout; still refused (which column they lack cannot be told: a name at the
    front read as missing at the end would shift every column)."""
    _, records = _tower()
    header, *lines = records.to_csv(index=False).splitlines()
    header = header + ",comment" if where == "end" else "id," + header
    (tmp_path / "named.csv").write_text("\n".join([header, *lines]) + "\n")
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "named.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"every record (line 2 to the end, {len(lines)} lines) has 6 fields" in message
    assert "the header names more columns than the records hold" in message
    assert "Split the file" not in message


def test_a_column_removed_mid_file_keeps_its_split(tmp_path):
    """A logger program that removed a column mid-file (records of 6 fields, then of 5)
    keeps the fix of splitting the file where it changed."""
    _, records = _tower()
    header, *lines = records.to_csv(index=False).splitlines()
    cut = [line.rsplit(",", 1)[0] for line in lines[200:]]
    (tmp_path / "removed.csv").write_text("\n".join([header, *lines[:200], *cut]) + "\n")
    with pytest.raises(InputFileError, match="Split the file at line 202"):
        _read(tmp_path / "removed.csv")


def test_database_export_layouts_read_as_written(tmp_path):
    """A database export: every field quoted (RFC 4180 (m): the same fields), names in
    capitals, stamps with fractional seconds, NULL for no value (declared as missing).
    Known-truth recovery on invented records: values and interval starts as written."""
    starts, records = _tower()
    frame = records.copy()
    frame.columns = [name.upper() for name in frame.columns]
    frame["STAMP"] = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M:%S.000")
    frame = frame.astype(object)
    frame.loc[3, "CO2_FLUX"] = "NULL"
    (tmp_path / "db.csv").write_text(frame.to_csv(index=False, quoting=csv.QUOTE_ALL))
    read, report = read_table(
        tmp_path / "db.csv", columns={key: name.upper() for key, name in MAPPING.items()},
        time_column="STAMP", time_format="%Y-%m-%d %H:%M:%S.%f", time_marks="end",
        missing=["NULL"])
    assert list(read.index) == list(starts)
    expected = records["co2_flux"].to_numpy(dtype=float).copy()
    expected[3] = np.nan
    np.testing.assert_array_equal(read["nee"].to_numpy(), expected)
    np.testing.assert_array_equal(read["rg"].to_numpy(), records["sw"].to_numpy())
    assert report.warnings == ()


def test_a_date_column_of_spreadsheet_day_numbers_is_named(tmp_path):
    """A date column saved from a spreadsheet as its day numbers beside an HHMM time
    column: Excel's serial 44197 is 2021-01-01 (days since 1899-12-30 from 1 March 1900
    on, the count that absorbs Excel's nonexistent 29 February 1900; Microsoft's 1900
    date system (m)), so 1 June 2021 is 44197 + 151. Named before only as "does not
    match"; now named as day numbers with the date they stand for. Still refused (the
    sheet's clock is the user's word)."""
    starts, records = _tower()
    ends = starts + pd.Timedelta(minutes=30)
    frame = records.drop(columns="stamp")
    frame.insert(0, "TIME", ends.hour * 100 + ends.minute)
    frame.insert(0, "DATE", 44197 + ends.day_of_year - 1)
    (tmp_path / "serial.csv").write_text(frame.to_csv(index=False))
    assert frame["DATE"].iloc[0] == 44197 + 151                   # 2021-06-01, by the count
    with pytest.raises(TimestampError) as caught:
        read_table(tmp_path / "serial.csv", columns=MAPPING, time_column=["DATE", "TIME"],
                   time_format="%Y-%m-%d %H%M", time_marks="end")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "the date field '44348' is a spreadsheet day number" in message
    assert "'44348' is 2021-06-01" in message


@pytest.mark.parametrize("form", ["parentheses", "trailing"])
def test_accounting_negatives_are_named_not_offered_as_missing_codes(tmp_path, form):
    """Negative NEE in an accounting format, '(3.1)' or '3.1-' for -3.1 (spreadsheet
    number formats; business reports, common practice). The refusal offered "if '(3.1)'
    marks missing data, add it to [input] missing", a fix that drops the negative values
    (the daytime uptake). Now named as negative numbers with the fix; still refused."""
    _, records = _tower()
    frame = records.astype(object)
    frame["co2_flux"] = [(f"({-v})" if form == "parentheses" else f"{-v}-") if v < 0 else str(v)
                   for v in records["co2_flux"]]
    (tmp_path / "report.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "report.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"{int((records['co2_flux'] < 0).sum())} such cell(s)" in message
    assert "a negative number in an accounting or business format" in message
    assert "add it to [input] missing" not in message


def test_database_zero_date_is_named_as_a_record_without_a_date(tmp_path):
    """A database's zero date '0000-00-00 00:00' (MySQL's stand-in for no date, MySQL
    reference manual (m)) in one record: named as a record without a date (was "does not
    match" alone)."""
    _, records = _tower()
    frame = records.astype(object)
    frame.loc[10, "stamp"] = "0000-00-00 00:00"
    (tmp_path / "zero.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(TimestampError, match=r"line 12 .*a database's zero date"):
        _read(tmp_path / "zero.csv")


def test_stamps_written_as_spreadsheet_text_formulas_are_read(tmp_path):
    """Stamps written as ="2021-06-01 00:30" (a spreadsheet formula that keeps a cell as
    text, common practice in exports meant for Excel): named as formulas with the fix
    until release 0.38.0 read them as the text between the quotes, with a note
    (:mod:`fluxpart.formula_cells`; this test still expected the refusal, review82)."""
    _, records = _tower()
    header, *lines = records.to_csv(index=False).splitlines()
    lines = ['="' + line.split(",", 1)[0] + '",' + line.split(",", 1)[1] for line in lines]
    (tmp_path / "formulas.csv").write_text("\n".join([header, *lines]) + "\n")
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    frame, report = _read(tmp_path / "formulas.csv")
    pd.testing.assert_frame_equal(frame, _read(tmp_path / "clean.csv")[0])
    assert any("spreadsheet's text formula" in note for note in report.notes)


def test_an_hhmm_time_column_under_a_colon_format_names_the_format(tmp_path):
    """A DATE column and a TIME column of HHMM integers (0, 30, 100, ..., 2330, as
    loggers write them; common practice) read under "%Y-%m-%d %H:%M": named with the
    format that reads them, which then reads the record as written (known truth)."""
    starts, records = _tower()
    ends = starts + pd.Timedelta(minutes=30)
    frame = records.drop(columns="stamp")
    frame.insert(0, "TIME", ends.hour * 100 + ends.minute)
    frame.insert(0, "DATE", ends.strftime("%Y-%m-%d"))
    (tmp_path / "hhmm.csv").write_text(frame.to_csv(index=False))
    kwargs = dict(columns=MAPPING, time_column=["DATE", "TIME"], time_marks="end")
    with pytest.raises(TimestampError, match=r"write %H%M for %H:%M in time_format"):
        read_table(tmp_path / "hhmm.csv", time_format="%Y-%m-%d %H:%M", **kwargs)
    read, report = read_table(tmp_path / "hhmm.csv", time_format="%Y-%m-%d %H%M", **kwargs)
    assert list(read.index) == list(starts)
    np.testing.assert_array_equal(read["nee"].to_numpy(), records["co2_flux"].to_numpy())
    assert report.warnings == ()


def test_exchanged_vpd_and_tair_columns_are_not_offered_pa(tmp_path):
    """A file whose data lines hold VPD and air temperature in the other order than its
    header (a column moved without its name): VPD then reads 14-22 "hPa" at tair 2-16 °C,
    about twice the saturation vapour pressure (Magnus form: 7.06 hPa at 2 °C, 18.2 hPa
    at 16 °C (m)). The refusal offered "the values look like 'Pa'", a fix that reads VPD
    a hundredth of the file's (relative humidity near 100 % throughout) and leaves the
    exchange in place. Now the mapping is named; Pa read as hPa (100 times the limit)
    keeps its fix."""
    starts, records = _tower()
    header = ",".join(records.columns)
    body = records[["stamp", "co2_flux", "us", "sw", "vpd", "t_air"]].to_csv(index=False,
                                                                             header=False)
    (tmp_path / "moved.csv").write_text(header + "\n" + body)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "moved.csv")
    message = str(caught.value)
    assert "exceed the saturation vapour pressure" in message
    assert "look like 'Pa'" not in message
    assert "check the column mapping" in message
    pascal = records.copy()
    pascal["vpd"] = records["vpd"] * 100.0                       # 1 hPa = 100 Pa (SI)
    (tmp_path / "pascal.csv").write_text(pascal.to_csv(index=False))
    with pytest.raises(ImplausibleValueError, match="the values look like 'Pa'"):
        _read(tmp_path / "pascal.csv")


@pytest.mark.parametrize("word", ["NULL", "\\N", "NaT"])
def test_a_null_word_in_the_time_column_is_named_as_a_record_without_a_date(tmp_path, word):
    """SQL's NULL and its text-dump form \\N (MySQL and PostgreSQL exports (m)) or
    pandas' NaT in the time column of one record: named as a record without a date (was
    "does not match" alone), also as the last line (not a summary)."""
    _, records = _tower()
    for row in (30, len(records) - 1):
        frame = records.astype(object)
        frame.loc[row, "stamp"] = word
        (tmp_path / "null.csv").write_text(frame.to_csv(index=False))
        with pytest.raises(TimestampError) as caught:
            _read(tmp_path / "null.csv")
        assert f"line {row + 2} " in str(caught.value)
        assert "a record without a date and time" in str(caught.value)
        assert "summary" not in str(caught.value)
