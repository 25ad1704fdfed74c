"""Layouts of the layouts25 round: files packed by a compressor the standard library
cannot open, stamps wrapped in single quotes, and a logger clock changed once at
midyear that was named as daylight saving.

Outside facts, each named beside its check: the leading bytes of Zstandard frames (RFC
8878 section 3.1.1: magic number 0xFD2FB528, little-endian), of LZ4 frames (LZ4 frame
format description: 0x184D2204, little-endian (m)), of lzip ("LZIP", lzip manual (m))
and of Unix compress (1F 9D (m)); CSV quotes with double quotes only (RFC 4180 section
2 (m)); daylight-saving time in the northern hemisphere runs from March to October or
early November, in the southern from September or October to April (time-zone database
rules (m)). Everything else is invented known truth: the records as written.
"""

import numpy as np
import pandas as pd
import pytest
from clock_sites import synthetic_rg

from fluxpart.clock import check_clock
from fluxpart.errors import InputFileError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}


def _lines(stamps):
    rows = ["stamp,co2_flux,us,sw,t_air,vpd"]
    rows += [f"{stamp},-1.5,0.31,120.0,14.2,6.1" for stamp in stamps]
    return "\n".join(rows) + "\n"


def _read(path):
    return read_table(path, columns=MAPPING, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end",
                      units={"vpd": "hPa"}, site=SITE)


@pytest.mark.parametrize(("magic", "name", "command"), [
    (bytes.fromhex("28b52ffd"), "Zstandard", "zstd -d"),   # 0xFD2FB528 LE (RFC 8878)
    (bytes.fromhex("04224d18"), "LZ4", "lz4 -d"),          # 0x184D2204 LE (LZ4 frame (m))
    (b"LZIP\x01", "lzip", "lzip -d"),                      # lzip manual (m)
    (bytes.fromhex("1f9d90"), "Unix compress", "uncompress"),   # .Z files (m)
])
def test_compressor_the_reader_cannot_open_is_named(tmp_path, magic, name, command):
    """Refused naming the compressor and the command that unpacks it; before, the bytes
    were read as text and refused as "not utf-8 text" with the hint to set [input]
    encoding, which cannot help."""
    path = tmp_path / "tower.csv.packed"
    path.write_bytes(magic + bytes(range(200, 256)) * 4)
    with pytest.raises(InputFileError) as caught:
        _read(path)
    message = str(caught.value)
    assert name in message and command in message
    assert "encoding" not in message


def test_plain_text_starting_like_no_compressor_reads(tmp_path):
    """A text table is read as before (known truth: the values written)."""
    path = tmp_path / "tower.csv"
    path.write_text(_lines([f"2021-06-01 {h:02d}:{m:02d}" for h in range(1, 5) for m in (0, 30)]))
    frame, _ = _read(path)
    assert len(frame) == 8 and np.allclose(frame["nee"], -1.5)


def test_single_quoted_stamps_are_named(tmp_path):
    """Stamps wrapped in apostrophes ('2021-06-01 00:30'): CSV quotes with double quotes
    only (RFC 4180 (m)), so the apostrophes stay in the cell. Refused naming them and the
    fix; before, the line gave no cause."""
    path = tmp_path / "tower.csv"
    path.write_text(_lines([f"'2021-06-01 {h:02d}:30'" for h in range(8)]))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert "single quotes" in str(caught.value)
    assert "remove the single quotes" in str(caught.value)


def _check(rg, latitude, longitude, utc_offset):
    return check_clock(rg.index, rg.to_numpy(), latitude, longitude, utc_offset, 30)


def test_first_half_year_an_hour_later_is_not_daylight_saving():
    """A logger on local time from January to June and reset to UTC (an hour earlier at
    UTC+1) from July: January to June lie an hour later against the sun than July to
    December. Northern summer time never covers January or February (time-zone database
    rules (m)), so this is a clock changed once, not daylight saving; it was refused with
    the fix "give [input] time_zone", which cannot mend it. Now the shifted period is named
    as a clock that was off."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, daylight_saving=(1, 7), seed=6)
    verdict = _check(rg, 49.3, 10.2, 1.0)
    assert verdict.status == "shifted"
    assert verdict.problems and "daylight-saving" not in verdict.problems[0]
    assert "time_zone" not in verdict.problems[0]
    assert "2021-01" in verdict.problems[0] or "2021-07" in verdict.problems[0]


@pytest.mark.parametrize(("latitude", "longitude", "utc_offset", "months"), [
    (50.0, 8.0, 1.0, (4, 11)),         # northern summer time, April to October
    (-35.3, 149.1, 10.0, (10, 4)),     # southern, October to March
])
def test_summer_time_in_its_season_is_still_named(latitude, longitude, utc_offset, months):
    """Civil time with daylight saving in the months the hemisphere keeps it (tz rules
    (m)) is still named as daylight saving, with [input] time_zone."""
    rg = synthetic_rg(latitude, longitude, utc_offset, interval_minutes=30,
                      daylight_saving=months, seed=6)
    verdict = _check(rg, latitude, longitude, utc_offset)
    assert verdict.status == "daylight_saving"
    assert "time_zone" in verdict.problems[0]


def test_southern_site_an_hour_later_in_its_winter_is_not_daylight_saving():
    """At a southern site, April to September an hour later: southern summer time never
    covers May to August (tz rules (m)); named as a clock off in a period instead."""
    rg = synthetic_rg(-35.3, 149.1, 10.0, interval_minutes=30, daylight_saving=(4, 10),
                      seed=6)
    verdict = _check(rg, -35.3, 149.1, 10.0)
    assert verdict.status != "daylight_saving"
    assert verdict.problems and "daylight-saving" not in verdict.problems[0]


def test_numbers_with_a_leading_apostrophe_are_named(tmp_path):
    """Cells "'0.329": a spreadsheet's prefix that keeps a number as text (Excel and
    LibreOffice (m)). Refused naming the apostrophe; before, the hint was to add the cell
    to [input] missing, which would have blanked that one value and named the next."""
    path = tmp_path / "tower.csv"
    rows = ["stamp,co2_flux,us,sw,t_air,vpd"]
    rows += [f"2021-06-01 {h:02d}:30,'-1.5,0.31,120.0,14.2,6.1" for h in range(8)]
    path.write_text("\n".join(rows) + "\n")
    with pytest.raises(InputFileError) as caught:
        _read(path)
    assert "leading apostrophe" in str(caught.value)
    assert "add it to [input] missing" not in str(caught.value)


@pytest.mark.parametrize("ending", ["\r\n\x1a", "\x1a", "\r\n\x1a\x1a\r\n"])
def test_dos_end_of_file_mark_is_no_record(tmp_path, ending):
    """A Ctrl-Z (0x1A) after the last line, or right after its last value: the end-of-file
    mark of CP/M and MS-DOS text files (m). Read as no content, every record whole (known
    truth: the values written); before, it was dropped as "a record cut short or a footer"
    with a warning, and written right after the last value it made that value no number."""
    path = tmp_path / "tower.csv"
    stamps = [f"2021-06-01 {h:02d}:{m:02d}" for h in range(1, 5) for m in (0, 30)]
    path.write_bytes(_lines(stamps).rstrip("\n").replace("\n", "\r\n").encode() + ending.encode())
    frame, report = _read(path)
    assert len(frame) == 8 and np.allclose(frame["vpd"], 6.1)
    assert not report.warnings


@pytest.mark.parametrize("stamp", ["2021-02-29 00:00", "2021-04-31 12:00"])
def test_a_day_the_month_lacks_is_named(tmp_path, stamp):
    """29 February 2021 (2021 is no leap year: Gregorian rule, divisible by 4 (m)) or 31
    April (April has 30 days (m)) among valid stamps: refused naming the impossible day;
    before, "1 stamp(s) fail to parse" gave no cause."""
    stamps = [f"2021-06-01 {h:02d}:30" for h in range(6)]
    stamps[3] = stamp
    path = tmp_path / "tower.csv"
    path.write_text(_lines(stamps))
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert "names a day its month lacks" in str(caught.value)
    assert stamp in str(caught.value)


def test_a_leap_day_in_a_leap_year_reads(tmp_path):
    """29 February 2020 exists (2020 is divisible by 4: a leap year (m)): read."""
    stamps = ["2020-02-28 23:00", "2020-02-28 23:30", "2020-02-29 00:00", "2020-02-29 00:30"]
    path = tmp_path / "tower.csv"
    path.write_text(_lines(stamps))
    frame, _ = _read(path)
    assert frame.index[-1] == pd.Timestamp("2020-02-29 00:00")


def test_whitespace_file_with_empty_values_names_the_collapse(tmp_path):
    """A blank-separated file with a value left empty (two blanks in a row): blanks
    collapse, so the line has one field fewer (common practice of whitespace-separated
    tables: runs of blanks are one separator, as in ``str.split()`` (Python documentation
    (m))). Refused naming that and a missing code as the fix; before, the fix named was
    "write missing values as empty cells between delimiters", which such a file cannot
    hold."""
    rows = ["stamp co2_flux us sw t_air vpd"]
    rows += [f"2021-06-01T{h:02d}:30 -1.5 0.31 120.0 14.2 6.1" for h in range(8)]
    rows[3] = "2021-06-01T02:30 -1.5  120.0 14.2 6.1"
    path = tmp_path / "tower.txt"
    path.write_text("\n".join(rows) + "\n")
    with pytest.raises(InputFileError) as caught:
        read_table(path, columns=MAPPING, time_column="stamp", time_format="%Y-%m-%dT%H:%M",
                   time_marks="end", units={"vpd": "hPa"}, site=SITE,
                   delimiter="whitespace")
    message = str(caught.value)
    assert "line 4" in message and "an empty value leaves no field" in message
    assert "empty cells between delimiters" not in message


def test_comment_line_among_records_is_skipped_and_named(tmp_path):
    """A note written among the records ("# sensor cleaned"; '#' opens a comment in many
    text formats, common practice): refused as a record cut short mid-number before
    layouts25, then refused naming a comment line; since layouts37 skipped (no record
    starts with '#') and named in the warnings, every record read."""
    rows = ["stamp,co2_flux,us,sw,t_air,vpd"]
    rows += [f"2021-06-01 {h // 2:02d}:{h % 2 * 30:02d},-1.5,0.31,120.0,14.2,6.1"
             for h in range(1, 9)]
    rows.insert(4, "# sensor cleaned")
    path = tmp_path / "tower.csv"
    path.write_text("\n".join(rows) + "\n")
    table, report = _read(path)
    assert len(table) == 8 and (table["nee"] == -1.5).all()
    assert any("line 5: '# sensor cleaned'" in w and "skipped" in w for w in report.warnings)
