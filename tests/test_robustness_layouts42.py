"""Layouts of the layouts42 round: a record cut short by a power cut right before the
header the restarted logger wrote again is dropped (as a file's last line cut short is);
files of data tools and workbooks, stamps written as a period, Unix time under "%s" and
counts of time in scientific notation are refused naming their cause and fix.

Outside facts, each named beside its check: an Arrow IPC file opens and closes with
"ARROW1" (Apache Arrow columnar format, "IPC File Format"; the file is written by
pyarrow, the general-purpose reference); an Office Open XML package holds
"[Content_Types].xml" (ECMA-376 part 2 (m)); Unix time 1622505600 s is 2021-06-01
00:00 UTC (POSIX.1; checked with Python's ``datetime``). Everything else is invented
known truth: the records as written.
"""

import io
import zipfile
from datetime import datetime, timezone

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE

from fluxpart.counted_time import rounded_counts
from fluxpart.errors import InputFileError, TimestampError
from fluxpart.io import read_table
from fluxpart.stamp_hints import _period_stamps


def _read(path, time_format="%Y%m%d%H%M"):
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE,
                      time_column="stamp", time_format=time_format, time_marks="end")


def test_a_record_cut_short_before_the_header_written_again_is_dropped(tmp_path):
    """Refused before layouts42 ("line 102 repeats the header line"); split there, as the
    refusal said, the first part's last line was dropped as cut short: the same reading."""
    frame, ends = _records()
    lines = frame.to_csv(index=False).splitlines()
    lines[100] = lines[100][:16]                       # "202106030230,3.4" of 6 fields
    lines[101:101] = [lines[0]]                        # the restarted logger's header
    (tmp_path / "t.csv").write_text("\n".join(lines) + "\n")
    read, report = _read(tmp_path / "t.csv")
    assert len(read) == len(ends)
    expected = frame["co2"].to_numpy(float).copy()
    expected[99] = np.nan                              # the cut record (line 101)
    np.testing.assert_array_equal(read["nee"].to_numpy(), expected)
    said = [w for w in report.warnings if "cut short right before the header" in w]
    assert len(said) == 1 and "line 101" in said[0] and "dropped" in said[0]


def test_a_cut_record_without_a_header_after_it_and_a_page_number_stay_refused(tmp_path):
    frame, _ = _records()
    lines = frame.to_csv(index=False).splitlines()
    cut = list(lines)
    cut[100] = cut[100][:16]                           # no header after it: refused
    (tmp_path / "cut.csv").write_text("\n".join(cut) + "\n")
    with pytest.raises(InputFileError, match=r"line 101 \('202106030200,3.6'\) has 2 fields"):
        _read(tmp_path / "cut.csv")
    page = list(lines)
    page[101:101] = ["2", lines[0]]                    # a page number: no record
    (tmp_path / "page.csv").write_text("\n".join(page) + "\n")
    with pytest.raises(InputFileError, match="repeats the header line"):
        _read(tmp_path / "page.csv")


def test_a_cut_first_record_and_quoted_delimiters_before_a_header_written_again(tmp_path):
    """Review60. A record cut short as the first after the header, the header written
    again after it (power cut on the logger's first write): its stamp is as long as that
    of the record after the header; refused before as "line 3 repeats the header line".
    A note column quoted where its text holds the delimiter ("ok, checked"; a quoted
    field holds the delimiter: RFC 4180, section 2 (m)) before a header written again:
    that record has the header's fields, as any CSV reader splits it; refused before."""
    frame, ends = _records()
    lines = frame.to_csv(index=False).splitlines()
    lines[1] = lines[1][:16]                           # "202106010030,1.8"
    lines[2:2] = [lines[0]]
    (tmp_path / "first.csv").write_text("\n".join(lines) + "\n")
    read, report = _read(tmp_path / "first.csv")
    assert read.index[0] == ends[1] - pd.Timedelta(minutes=30) and len(read) == len(ends) - 1
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float)[1:])
    said = [w for w in report.warnings if "cut short right before the header" in w]
    assert len(said) == 1 and "line 2" in said[0]
    noted = frame.assign(note=["ok, checked"] * len(frame))
    lines = noted.to_csv(index=False).splitlines()
    assert lines[1].endswith('"ok, checked"')
    lines[151:151] = [lines[0]]
    (tmp_path / "noted.csv").write_text("\n".join(lines) + "\n")
    read, report = _read(tmp_path / "noted.csv")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    assert any("written again 1 time(s)" in w and "line 152" in w for w in report.notes)


def test_files_of_data_tools_and_workbooks_are_named(tmp_path):
    """A Feather file was "not utf-8 text; set [input] encoding", a workbook "a zip
    archive: unpack it" (its parts are XML, no table) before layouts42; a Feather file is
    read since layouts46 (:mod:`fluxpart.table_formats`), the same records as its CSV."""
    pyarrow = pytest.importorskip("pyarrow")
    from pyarrow import feather

    frame, _ = _records(48)
    feather.write_feather(pyarrow.Table.from_pandas(frame), tmp_path / "t.feather")
    data = (tmp_path / "t.feather").read_bytes()
    assert data[:6] == data[-6:] == b"ARROW1"          # the Arrow IPC file format
    (tmp_path / "t.csv").write_text(frame.to_csv(index=False))
    pd.testing.assert_frame_equal(_read(tmp_path / "t.feather")[0], _read(tmp_path / "t.csv")[0])
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as package:      # an OOXML package's parts
        package.writestr("[Content_Types].xml", "<Types/>")
        package.writestr("xl/workbook.xml", "<workbook/>")
    (tmp_path / "t.xlsx").write_bytes(buffer.getvalue())
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "t.xlsx")
    assert "Office Open XML workbook" in str(caught.value)
    assert "save the sheet of records as CSV" in str(caught.value)
    assert "unpack" not in str(caught.value)
    # a text table whose header opens with the magic bytes is read as text
    text = frame.rename(columns={"stamp": "ARROW1stamp"})
    (tmp_path / "arrow.csv").write_text(text.to_csv(index=False))
    read = read_table(tmp_path / "arrow.csv", columns=MAPPING, units={"vpd": "kPa"},
                      site=SITE, time_column="ARROW1stamp", time_format="%Y%m%d%H%M",
                      time_marks="end")[0]
    assert len(read) == 48


def test_stamps_written_as_a_period_are_named_with_the_fix(tmp_path):
    frame, ends = _records(48)
    start = ends - pd.Timedelta("30min")
    frame["stamp"] = [f"{a:%Y-%m-%d %H:%M}-{b:%H:%M}" for a, b in zip(start, ends,
                                                                      strict=True)]
    (tmp_path / "t.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "t.csv", "%Y-%m-%d %H:%M")
    assert "write a period" in str(caught.value) and 'time_marks = "start"' \
        in str(caught.value)
    # a clock and a UTC offset is no period: 10.5 h is no record's length, and a
    # column of them lasts no one length
    assert _period_stamps(pd.Series(["2021-06-01 14:30:00-01:00"])) == ""
    assert _period_stamps(pd.Series(["2021-06-01T00:00:00-01:00",
                                     "2021-06-01T00:30:00-01:00"])) == ""
    assert _period_stamps(pd.Series(["2021-06-01 23:30 to 00:00"])) != ""


def test_unix_time_under_percent_s_names_the_counted_form(tmp_path):
    frame, ends = _records(48)
    seconds = (ends - pd.Timedelta("1h") - pd.Timestamp("1970-01-01")) // pd.Timedelta("1s")
    assert datetime.fromtimestamp(1622505600, timezone.utc) == datetime(
        2021, 6, 1, tzinfo=timezone.utc)               # POSIX time, by the standard library
    frame["stamp"] = [str(v) for v in seconds]
    (tmp_path / "t.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "t.csv", "%s")
    form = "seconds since 1970-01-01 UTC"
    assert form in str(caught.value)
    read, _ = _read(tmp_path / "t.csv", form)          # the fix it names reads them
    assert read.index[0] == pd.Timestamp("2021-06-01 00:00")   # interval start, UTC+1
    assert seconds[0] == 1622505600 - 1800             # 00:30 at UTC+1 is 23:30 UTC


def test_counts_too_coarse_for_a_record_are_refused_naming_their_digits():
    """A 13-digit count of milliseconds shown with seven significant digits (a
    spreadsheet's General format) is 1000 s coarse: refused before layouts42 as records
    33.3 minutes apart; day numbers with three decimals (86.4 s: 1 day = 86 400 s) as a
    logger stamping the moment it writes. Digits that divide the half hour (whole
    minutes, hours to one decimal) or of 20 s or less (days to four decimals: 8.64 s)
    place every record: read."""
    millis = pd.Series(["1.622505E+12", "1.622507E+12"])
    said = rounded_counts(millis, "milliseconds since 1970-01-01 UTC")
    assert "scientific notation to a last digit of 1000 s" in said and "more digits" in said
    days = pd.Series(["44348.021", "44348.042", "44348.5"])   # 44348.5: zeros dropped
    assert "last digit of 86.4 s" in rounded_counts(days, "days since 1899-12-30")
    for cells, form in ((["4.4348020833E+04"], "days since 1899-12-30"),
                        (["44348.0208", "44348.0417"], "days since 1899-12-30"),
                        (["30", "60", "90"], "minutes since 2021-06-01"),
                        (["0.5", "1", "1.5"], "hours since 2021-06-01"),
                        (["1622505600000"], "milliseconds since 1970-01-01 UTC")):
        assert rounded_counts(pd.Series(cells), form) == "", cells


def test_hourly_records_counted_in_whole_hours_are_read(tmp_path):
    """Review60: 60-minute records written as whole hours since a date (a digit of
    3600 s: 1 h = 3600 s) were refused by the check above as too coarse, read before
    layouts42; half-hourly records rounded onto whole hours (a count repeated) are still
    named."""
    frame, ends = _records()
    frame, ends = frame.iloc[1::2].reset_index(drop=True), ends[1::2]
    start = datetime(2021, 6, 1)
    frame["stamp"] = [f"{(end.to_pydatetime() - start).total_seconds() / 3600:g}"
                      for end in ends]
    assert frame["stamp"].str.fullmatch(r"\d+").all()
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    read, _ = _read(path, "hours since 2021-06-01 00:00")
    assert len(read) == len(ends) and read.index[0] == pd.Timestamp("2021-06-01 00:00")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    collapsed = pd.Series(["1", "1", "2", "2", "3"])      # 30-minute records, whole hours
    assert "last digit of 3600 s" in rounded_counts(collapsed, "hours since 2021-06-01")
    repeated = pd.Series([str(hour) for hour in [*range(1, 10), 9, *range(10, 20)]])
    assert rounded_counts(repeated, "hours since 2021-06-01") == ""   # a duplicated record


def test_lines_wrapped_whole_in_quotes_are_named_not_a_delimiter_setting(tmp_path):
    """Before layouts42: "the header is one cell holding commas: set [input] delimiter =
    ','", the delimiter already set. A field in quotes holds the delimiter (RFC 4180,
    section 2 (m)): each such line is one field."""
    frame, _ = _records(48)
    lines = frame.to_csv(index=False).splitlines()
    (tmp_path / "t.csv").write_text("\n".join(f'"{line}"' for line in lines) + "\n")
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "t.csv")
    assert "wrapped in one pair of double quotes" in str(caught.value)
    assert "delimiter =" not in str(caught.value)
    # quoted fields, as CSV writers quote them, are read
    quoted = ['"' + '","'.join(line.split(",")) + '"' for line in lines]
    (tmp_path / "q.csv").write_text("\n".join(quoted) + "\n")
    assert len(_read(tmp_path / "q.csv")[0]) == 48


def test_decimal_commas_of_a_tab_file_ask_for_the_decimal_setting_alone(tmp_path):
    """The hint added "(and the delimiter, e.g. delimiter = ';')" before layouts42, to a
    tab file whose delimiter was set and had split the fields."""
    frame, _ = _records(48)
    text = frame.to_csv(index=False, sep="\t").replace(".", ",")
    (tmp_path / "t.txt").write_text(text)
    with pytest.raises(InputFileError) as caught:
        read_table(tmp_path / "t.txt", columns=MAPPING, units={"vpd": "kPa"}, site=SITE,
                   time_column="stamp", time_format="%Y%m%d%H%M", time_marks="end",
                   delimiter="\t")
    assert 'it looks like a decimal comma: set [input] decimal = ","' in str(caught.value)
    assert "delimiter" not in str(caught.value)
    read = read_table(tmp_path / "t.txt", columns=MAPPING, units={"vpd": "kPa"},
                      site=SITE, time_column="stamp", time_format="%Y%m%d%H%M",
                      time_marks="end", delimiter="\t", decimal=",")[0]
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())
