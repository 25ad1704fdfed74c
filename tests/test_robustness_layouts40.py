"""Layouts of the layouts40 round: a decimal hour beside a date and a year beside a decimal
day of the year, read as the clock they state; a header block written again whose title
names a program's new version or whose units line writes the same units in another
notation, read past; one whose units line names another unit, refused naming the change.

Outside facts, each named beside its check: an hour is 60 minutes and a day 1440 (SI
Brochure, 9th ed., table 8 (m)); %j counts the days of the year from 001 for 1 January
(Python documentation, ``datetime.strptime`` (m)); a decimal number states its value to
half its last digit (common practice (m)); "m/s", "m s-1" and "W/m2", "W m-2" write one
unit (SI Brochure, 9th ed., 5.4.6 (m)); a kilowatt is 1000 watts. Everything else is
invented known truth: the records as written, compared value for value and stamp for
stamp.
"""

import re
import zipfile

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE, UNITS_LINE

from fluxpart.decimal_time import decimal_stamps
from fluxpart.errors import InputFileError
from fluxpart.io import read_table
from fluxpart.timestamps import parse_stamps
from fluxpart.zero_seconds import zero_tails


def _parse(text, time_format, columns=("date", "hour")):
    series = pd.Series(text)
    return parse_stamps(series, time_format, time_columns=columns, source="t.csv",
                        lines=np.arange(2, len(series) + 2))


def _read(path, **options):
    settings = {"time_column": "stamp", "time_format": "%Y%m%d%H%M", "time_marks": "end"}
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE,
                      **(settings | options))


# ------------------------------------------------------- decimal hours and days
def test_a_decimal_hour_beside_a_date_is_read_as_its_clock(tmp_path):
    """Refused before layouts40 ("decimal fractions, which no time_format reads"). 0.5 h
    is 30 minutes; 24.00 closes the day (the next midnight), as 24:00 does."""
    frame, ends = _records()
    hours = np.where((ends.hour == 0) & (ends.minute == 0), 24.0, ends.hour + ends.minute / 60)
    frame = frame.drop(columns="stamp")
    frame.insert(0, "hour", [f"{h:.2f}" for h in hours])
    frame.insert(0, "date", (ends - pd.Timedelta("30min")).strftime("%d.%m.%Y"))
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    read, report = _read(path, time_column=["date", "hour"], time_format="%d.%m.%Y %H")
    assert read.index.equals(pd.DatetimeIndex(ends - pd.Timedelta("30min"), name="time")
                             .as_unit(read.index.unit))
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())
    assert report.stamp_conversions["decimal_fields"] == len(ends)
    assert report.stamp_conversions["hour_24"] == 10           # one midnight a day


@pytest.mark.parametrize("cell, clock", [
    ("0.17", "00:10:00"),    # 10.2 min, stated to 0.3 min: the whole minute 10
    ("13.333", "13:20:00"),  # 799.98 min to 0.03 min: 800
    ("6.1", "06:06:00"),     # 366 min exactly
    ("6.1234", "06:07:24"),  # 367.404 min to 0.003 min: no whole minute, to the second
])
def test_a_decimal_hour_is_read_to_the_precision_it_states(cell, clock):
    text, time_format, count = decimal_stamps(pd.Series([f"2021-06-01 {cell}"]),
                                              "%Y-%m-%d %H")
    assert (list(text), time_format, count) == ([f"2021-06-01 {clock}"],
                                                "%Y-%m-%d %H:%M:%S", 1)


def test_a_decimal_day_of_the_year_counts_from_one():
    """1.02083 is 30/1440 of 1 January (%j: 001 is 1 January); 366.00000 of 2021 (a day
    past its last, the midnight ending the year) is 2022-01-01 00:00. A day counted
    from 0 (refused before leftovers50) is read as such where a day below 1 shows it."""
    parsed = _parse(["2021 1.02083", "2021 64.60417", "2021 365.97917", "2021 366.00000",
                     "2024 60.5"], "%Y %j", ("yr", "doy"))
    assert list(parsed.stamps) == [pd.Timestamp(s) for s in (
        "2021-01-01 00:30", "2021-03-05 14:30", "2021-12-31 23:30", "2022-01-01 00:00",
        "2024-02-29 12:00")]
    assert parsed.decimal_fields == 5
    parsed = _parse(["2021 0.02083", "2021 0.04167"], "%Y %j", ("yr", "doy"))
    assert list(parsed.stamps) == [pd.Timestamp("2021-01-01 00:30"),
                                   pd.Timestamp("2021-01-01 01:00")]
    assert len(parsed.notes) == 1 and "counts from 0" in parsed.notes[0]


def test_decimal_fields_leave_other_formats_alone():
    """A format ending in neither %H nor %j, and stamps without a fraction, as given."""
    for text, time_format in ((["2021-06-01 13:30"], "%Y-%m-%d %H:%M"),
                              (["2021 152 13"], "%Y %j %H"),
                              (["2021060113.5"], "%Y%m%d%H")):
        assert decimal_stamps(pd.Series(text), time_format)[1:] == (time_format, 0)


@pytest.mark.parametrize("written, time_format", [
    ("%Y-%m-%d %H:%M:%S.000", "%Y-%m-%d %H:%M:%S"),   # refused before layouts40
    ("%Y-%m-%d %H:%M:%S", "%Y-%m-%d %H:%M"),          # refused before layouts40
    ("%d.%m.%Y %H:%M:%S,000", "%d.%m.%Y %H:%M"),      # a decimal comma
])
def test_places_of_zero_beyond_the_format_are_read_past(written, time_format):
    """13:30:00.000 names the minute 13:30 names (ISO 8601-1, lower order components
    (m)); a second that is not zero stays the reader's to judge."""
    ends = pd.date_range("2021-06-01 00:30", periods=96, freq="30min")
    assert list(_parse(list(ends.strftime(written)), time_format, ("stamp",)).stamps) \
        == list(ends)
    drifting = pd.Series(list(ends.strftime("%Y-%m-%d %H:%M:%S")))
    drifting.iloc[5] = drifting.iloc[5][:-2] + "07"
    assert zero_tails(drifting, "%Y-%m-%d %H:%M") == (drifting, 0)


# ------------------------------------------------------- a header block written again
def _two_blocks(path, title, later_title, later_units, later=lambda part: part):
    frame, ends = _records()
    header = ",".join(frame.columns)
    first = frame.iloc[:240].to_csv(index=False, header=False).splitlines()
    second = later(frame.iloc[240:].copy()).to_csv(index=False, header=False).splitlines()
    path.write_text("\n".join([title, header, UNITS_LINE] + first
                              + [later_title, header, later_units] + second) + "\n")
    return frame, ends


def test_a_block_naming_a_new_program_version_or_another_notation_is_read_past(tmp_path):
    """Refused before layouts40 ("repeats the header line ...: remove it"): the same
    names and the same units (W/m2 is W m-2, m/s is m s-1), so every record is read as
    written, and the warning quotes what the block wrote otherwise."""
    path = tmp_path / "t.csv"
    frame, ends = _two_blocks(path, "Quillmoor T2 qm_flux_v7", "Quillmoor T2 qm_flux_v8",
                              "-,umol/m2/s,W/m2,degC,kPa,m/s")
    read, report = _read(path, rows_before_header=1, rows_after_header=1)
    assert len(read) == len(ends)
    np.testing.assert_array_equal(read["rg"].to_numpy(), frame["sw"].to_numpy())
    warned = next(w for w in report.warnings if "written again 1 time(s)" in w)
    assert "'Quillmoor T2 qm_flux_v8' on line 244" in warned
    assert "'-,umol/m2/s,W/m2,degC,kPa,m/s' on line 246" in warned


def test_a_block_naming_another_unit_is_refused_naming_the_change(tmp_path):
    """Rg in kW m-2 after a firmware update (1 kW = 1000 W): before layouts40 the
    message said to remove the block, which reads the later values as W m-2."""
    def kilowatts(part):
        part["sw"] = part["sw"] / 1000
        return part

    path = tmp_path / "t.csv"
    _two_blocks(path, "Quillmoor T2", "Quillmoor T2", UNITS_LINE.replace("W m-2", "kW m-2"),
                kilowatts)
    with pytest.raises(InputFileError) as caught:
        _read(path, rows_before_header=1, rows_after_header=1)
    message = str(caught.value)
    assert "'sw': 'W m-2' under the header of line 2, 'kW m-2' under line 245" in message
    assert "remove it" not in message and "split the file there" in message


def test_a_record_cut_short_before_a_block_is_no_title(tmp_path):
    """A line opening with a digit above the header written again is a record cut short
    (a power cut), not a title of a new version: refused as before."""
    frame, _ = _records()
    header = ",".join(frame.columns)
    rows = frame.to_csv(index=False, header=False).splitlines()
    path = tmp_path / "t.csv"
    path.write_text("\n".join(["Quillmoor T2", header, UNITS_LINE] + rows[:100]
                              + [rows[100][:14], header, UNITS_LINE] + rows[101:]) + "\n")
    with pytest.raises(InputFileError, match=r"repeats the header line"):
        _read(path, rows_before_header=1, rows_after_header=1)


# ------------------------------------------------------- bracketed units holding blanks
def test_whitespace_names_with_bracketed_units_are_one_name_a_field(tmp_path):
    """Refused before layouts40 ("every record has 6 fields where the header has 16"):
    split at the blanks outside the brackets, the header has one name a field."""
    frame, ends = _records()
    units = ["", " [umol m-2 s-1]", " [W m-2]", " (deg C)", " [kPa]", " [m s-1]"]
    names = [name + unit for name, unit in zip(frame.columns, units, strict=True)]
    body = frame.to_csv(index=False, header=False, sep=" ").splitlines()
    path = tmp_path / "t.dat"
    path.write_text("\n".join(["  ".join(names)] + body) + "\n")
    mapping = {key: names[list(frame.columns).index(column)] for key, column in MAPPING.items()}
    read, report = read_table(path, columns=mapping, units={"vpd": "kPa"}, site=SITE,
                              time_column="stamp", time_format="%Y%m%d%H%M",
                              time_marks="end", delimiter="whitespace")
    np.testing.assert_array_equal(read["tair"].to_numpy(), frame["t_air"].to_numpy())
    assert len(read) == len(ends)
    assert any("'co2 [umol m-2 s-1]'" in w and "outside their bracketed units" in w
               for w in report.notes)
    # whole names, four at most (review55: cut at 160 characters, mid-name)
    said = next(w for w in report.notes if "outside their bracketed units" in w)
    shown = said.split("bracketed units (", 1)[1]
    assert re.findall(r"'([^']*)'", shown) == [name for name in names if " " in name][:4]
    assert said.endswith(" and 1 more), one a field")
    # a header whose words fit no field count stays refused, naming the mismatch
    path.write_text("\n".join(["  ".join(names) + " spare [V]"] + body) + "\n")
    with pytest.raises(InputFileError, match=r"where the header has"):
        read_table(path, columns=mapping, units={"vpd": "kPa"}, site=SITE,
                   time_column="stamp", time_format="%Y%m%d%H%M", time_marks="end",
                   delimiter="whitespace")


# ------------------------------------------------------- a portal's zip
def _zip(path, members):
    with zipfile.ZipFile(path, "w") as archive:
        for name, data in members:
            archive.writestr(name, data)


def test_a_zip_of_one_table_and_its_documents_is_the_table(tmp_path):
    """A portal's download: the table, a read-me and the licence (refused before
    layouts40 as "a zip archive holding 3 file(s)"); two tables stay refused, named."""
    frame, ends = _records()
    table_text = frame.to_csv(index=False)
    _zip(tmp_path / "t.zip", [("tower.csv", table_text), ("README.txt", "-9999 is missing\n"),
                              ("LICENSE", "CC BY 4.0\n"), ("doc/site.pdf", "%PDF-1.4\n")])
    read, _ = _read(tmp_path / "t.zip")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())
    _zip(tmp_path / "two.zip", [("a.csv", table_text), ("b.csv", table_text),
                                ("README.txt", "two halves\n")])
    with pytest.raises(InputFileError, match=r"zip archive holding 3 file\(s\)"):
        _read(tmp_path / "two.zip")
    # a read-me without its table is no table (review55: it was read as the table and
    # refused for a missing time column, its one line a header)
    _zip(tmp_path / "doc.zip", [("README.txt", "-9999 is missing\n"), ("LICENSE", "CC BY\n")])
    with pytest.raises(InputFileError, match=r"documents only \('README.txt', 'LICENSE'"):
        _read(tmp_path / "doc.zip")
    _zip(tmp_path / "one.zip", [("README.txt", "-9999 is missing\n")])
    with pytest.raises(InputFileError, match=r"documents only \('README.txt': .*no table"):
        _read(tmp_path / "one.zip")
    # a web page alone may be a portal's table: read, and named by the reader as HTML
    _zip(tmp_path / "page.zip", [("fluxes.html", "<html><table><tr><td>1</td></tr></table>\n")])
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "page.zip")
    assert "documents only" not in str(caught.value) and "HTML" in str(caught.value)
