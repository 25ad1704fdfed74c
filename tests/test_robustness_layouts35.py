"""Layouts of the layouts35 round: clocks stated above the header, fixed-width columns.

Outside facts, each named beside its check: ISO 8601-1:2019 writes a clock's offset from
UTC as ±hh, ±hhmm or ±hh:mm, positive east of Greenwich, so a clock "1 h ahead of UTC"
is UTC+1 (m); zones keep offsets of whole hours or of :30 and :45 (IANA time zone
database (m)), so "clock offset: -00:03" is a clock's drift, no zone; fixed-width text
tables (FORTRAN formatted output, logger exports) leave no blank between a value that
fills its field and the next (common practice). Everything else is invented known truth:
the records as written.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import ConfigError, InputFileError, MissingColumnError, TimestampError
from fluxpart.fixed_width import fused_header_names, run_together_field
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_places import stated_offset
from fluxpart.uncertainty_assembly import measured_in_range

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2", "rg": "sw", "tair": "t_air", "vpd": "vpd", "ustar": "us"}


def _records(count=48 * 10):
    """Invented half-hourly records of 1-10 June 2021 (end stamps, UTC+1)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    day = np.sin((ends.hour + ends.minute / 60 - 6) / 12 * np.pi)
    rng = np.random.default_rng(35)
    return pd.DataFrame({
        "stamp": ends.strftime("%Y%m%d%H%M"),
        "co2": (3 - 12 * np.clip(day, 0, None) + rng.normal(0, 1, count)).round(3),
        "sw": (np.clip(800 * day, 0, None) + 1.0).round(1),
        "t_air": (15 + 6 * day).round(2), "vpd": (0.8 + 0.6 * np.clip(day, 0, None)).round(3),
        "us": (0.3 + 0.1 * rng.random(count)).round(3)}), ends


def _read(path, **options):
    return read_table(path, columns=MAPPING, time_column="stamp", time_format="%Y%m%d%H%M",
                      time_marks="end", units={"vpd": "kPa"}, site=SITE, **options)


@pytest.mark.parametrize("line, offset", [
    # ISO 8601 offsets after a clock's offset key: read since layouts35 (was None)
    ("Logger clock offset: UTC+02:00", 2.0), ("clock_offset=+02:00", 2.0),
    ("Time-zone offset: -0500", -5.0), ("utc_offset_minutes=120", 2.0),
    ("Logger clock set to UTC+2", 2.0), ("All values in UTC+2", 2.0), ("Data in UTC", 0.0),
    ("Hours from UTC: 2", 2.0), ("Date & time (UTC+2)", 2.0), ("Data in GMT-based format", None),
    # an offset counted from UTC in words, read as UTC (0) before layouts35
    ("Time zone (hours from UTC): 2", 2.0), ("Time zone: 1 h ahead of UTC", 1.0),
    ("Time zone: 5 hours behind GMT", -5.0), ("Time zone: 2 h from UTC", None),
    # a clock's drift is no zone (IANA: offsets of :00, :30, :45)
    ("Clock offset: +12 s", None), ("Clock offset: -00:03", None),
    # kept: a date beside UTC, a plain clock key
    ("Time zone: UTC (exported 2021-06-01)", 0.0), ("Clock: UTC+2", 2.0),
])
def test_clocks_stated_above_the_header_are_read_as_iso_8601_offsets(line, offset):
    assert stated_offset(line) == offset


@pytest.mark.parametrize("line, offset", [
    # the clock the stamps were converted from, or an event's (review44: each was read as
    # stamps in UTC, and a site at UTC+1 refused)
    ("Data in UTC converted to CET", None), ("Values in UTC were converted to local time", None),
    ("Times in UTC converted to local standard time", None),
    ("Timestamps converted from UTC to local time", None),
    ("Date and time of export (UTC): 2021-06-01 12:00", None),
    ("Datetime of file creation (UTC): 2021-06-01", None),
    # kept: a conversion into UTC, a conversion denied, the stamps' clock beside an export's
    ("Timestamps converted to UTC", 0.0), ("Stamps in UTC, not converted", 0.0),
    ("All times in UTC; no conversion", 0.0), ("Export 2021-06-01 (UTC); timestamps in UTC+1", 1.0),
])
def test_a_clock_converted_from_or_of_an_export_is_not_the_stamps(line, offset):
    assert stated_offset(line) == offset


def test_a_clock_offset_line_other_than_the_site_is_refused_naming_both(tmp_path):
    """Before: "Logger clock offset: UTC+02:00" above stamps read as UTC+1 was read
    without a word; now both readings are named."""
    frame, _ = _records()
    path = tmp_path / "t.csv"
    path.write_text("Quillmoor tower\nLogger clock offset: UTC+02:00\n"
                    + frame.to_csv(index=False))
    with pytest.raises(TimestampError, match=r"UTC\+2.*UTC\+1.*1 hour"):
        _read(path, rows_before_header=2)


def test_an_offset_counted_from_utc_in_words_is_not_read_as_utc(tmp_path):
    """Before: "Time zone (hours from UTC): 1" was read as UTC and the file, written in
    the site's UTC+1, refused ("set time_zone = UTC"); now it reads, record for record."""
    frame, ends = _records()
    path = tmp_path / "t.csv"
    path.write_text("Quillmoor tower\nTime zone (hours from UTC): 1\n"
                    + frame.to_csv(index=False))
    read, _ = _read(path, rows_before_header=2)
    starts = ends - pd.Timedelta("30min")
    assert read.index.equals(pd.DatetimeIndex(starts, name="time").as_unit(read.index.unit))
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())


def _fixed(frame, widths):
    lines = ["".join(str(c).rjust(w) for c, w in zip(frame.columns, widths, strict=True))]
    lines += ["".join(str(v).rjust(w) for v, w in zip(row, widths, strict=True))
              for row in frame.astype(str).to_numpy()]
    return "\n".join(lines) + "\n"


def test_values_that_fill_a_fixed_width_are_named_as_run_together(tmp_path):
    """Before: '202106010130-9999.0' (a missing code filling its 7-character field) was
    named "an empty value leaves no field ... or a record cut short"."""
    frame, _ = _records()
    frame["co2"] = frame["co2"].map("{:.3f}".format)
    frame.loc[2, "co2"] = "-9999.0"
    path = tmp_path / "t.dat"
    path.write_text(_fixed(frame, [12, 7, 7, 7, 7, 7]))
    with pytest.raises(InputFileError, match=r"line 4 .*'202106010130-9999\.0' is two "
                                             r"values run together.*fixed widths"):
        _read(path, delimiter="whitespace", missing=[-9999])


def test_names_that_fill_a_fixed_width_are_named_as_run_together(tmp_path):
    """Before: "line 2 has 7 fields where the header has 6 ... Is a column name missing
    in the header?"; now the cell holding two names is named."""
    frame, _ = _records()
    frame = frame.rename(columns={"sw": "solar_wm2"})
    path = tmp_path / "t.dat"
    path.write_text(_fixed(frame, [14, 9, 9, 9, 9, 9]))
    with pytest.raises(InputFileError, match=r"'co2solar_wm2' stand\(s\) over 2 columns"):
        _read(path, delimiter="whitespace")


def test_dates_and_aligned_headers_are_not_taken_for_fields_run_together():
    assert run_together_field("2021-06-01 00:30 -3.25 01.06.2021 2021.06.01 1e-5") is None
    assert run_together_field("0.5161013.2 1") == "0.5161013.2"
    # a header one name short over aligned columns: no cell spans two fields
    assert fused_header_names("   stamp     co2", "  202106010030   0.5  1.2") == []


# ------------------------------------------------ [input] column_widths reads them
WIDTHS = [12, 7, 7, 7, 7, 7]


def _touching(tmp_path, title=""):
    """Invented records in columns of WIDTHS whose values fill them: '-9999.0' and
    '-10.125' touch their neighbour; blanks stand for a value not written."""
    frame, ends = _records()
    frame = frame.astype({"co2": str, "t_air": str, "us": str})
    frame["co2"] = pd.to_numeric(frame["co2"]).map("{:.3f}".format)
    frame.loc[2, "co2"] = "-9999.0"
    frame.loc[5, "t_air"] = "-10.125"
    frame.loc[7, "us"] = ""
    path = tmp_path / "t.dat"
    path.write_text(title + _fixed(frame, WIDTHS))
    return path, frame, ends


def test_column_widths_read_values_that_touch_and_blank_cells(tmp_path):
    """layouts35: a fixed-width file read at its widths, value for value (a blank field
    is an empty cell, read as missing; -9999.0 a missing code)."""
    path, frame, ends = _touching(tmp_path, title="Quillmoor tower, fixed columns\n")
    read, _ = _read(path, column_widths=WIDTHS, rows_before_header=1, missing=[-9999])
    assert len(read) == len(frame)
    expected = pd.to_numeric(frame["co2"]).where(lambda v: v != -9999)
    np.testing.assert_array_equal(read["nee"].to_numpy(), expected.to_numpy())
    assert read["tair"].iloc[5] == -10.125 and np.isnan(read["ustar"].iloc[7])
    assert read.index[0] == ends[0] - pd.Timedelta("30min")


def test_column_widths_keep_a_record_cut_short_and_refuse_a_tab(tmp_path):
    path, _, _ = _touching(tmp_path)
    lines = path.read_text().splitlines()
    path.write_text("\n".join(lines[:-1] + [lines[-1][:16]]) + "\n")
    warnings = _read(path, column_widths=WIDTHS, missing=[-9999])[1].warnings
    assert any("record cut short" in w for w in warnings)
    path.write_text("\n".join(lines[:3] + [lines[3].replace(" ", "\t", 1)] + lines[4:]) + "\n")
    with pytest.raises(InputFileError, match=r"line 4 holds a tab"):
        _read(path, column_widths=WIDTHS, missing=[-9999])


def test_column_widths_beside_a_delimiter_or_off_by_one_are_named(tmp_path):
    path, _, _ = _touching(tmp_path)
    with pytest.raises(ConfigError, match=r"column_widths and delimiter"):
        _read(path, column_widths=WIDTHS, delimiter="whitespace")
    # named through the cut column's name until layouts54; now as the widths, with the
    # widths the header's and the first record's aligned ends give (the file's own)
    with pytest.raises(InputFileError, match=r"column_widths = \[12, 6, 8, 7, 7, 7\] cut the "
                       r"header inside its names .*give column_widths = \[12, 7, 7, 7, 7, 7\]"):
        _read(path, column_widths=[12, 6, 8, 7, 7, 7], missing=[-9999])
    assert list(WIDTHS) == [12, 7, 7, 7, 7, 7]


def test_a_soil_temperature_code_outside_its_range_is_no_measurement_in_the_refit():
    """layouts35: an undeclared -7999 in tsoil made the other temperature's refit fail,
    and the temperature part of the uncertainty went NaN without a word."""
    series = pd.DataFrame({"tsoil": [4.0, -7999.0, 5.0],
                           "tsoil_out_of_range": [False, True, False]})
    values = measured_in_range(series, "tsoil")
    np.testing.assert_array_equal(values, [4.0, np.nan, 5.0])


def test_names_and_values_in_single_quotes_are_read_without_them(tmp_path):
    """Before: "did you mean \\"'stamp'\\"?", whose fix led to a refusal of the stamps;
    layouts35 named the single quotes, which are no CSV quotes (RFC 4180 quotes with
    '"'); since layouts51 a file whose every name and value is wrapped in them is read
    without them, noted, as the same file unquoted (known truth: the values written)."""
    frame, _ = _records(48)
    path = tmp_path / "t.csv"
    path.write_text(frame.astype(str).apply(lambda c: "'" + c + "'")
                    .rename(columns=lambda c: f"'{c}'").to_csv(index=False))
    (tmp_path / "plain.csv").write_text(frame.astype(str).to_csv(index=False))
    read, report = _read(path)
    pd.testing.assert_frame_equal(read, _read(tmp_path / "plain.csv")[0])
    assert any("wrapped in single quotes" in note for note in report.notes)
    # names quoted, values not: still named, no guess (layouts35)
    path.write_text(frame.astype(str).rename(columns=lambda c: f"'{c}'").to_csv(index=False))
    with pytest.raises(MissingColumnError, match=r"wrapped in single quotes"):
        _read(path)


# ------------------------------------------------ [input.other_names]: a column renamed
def test_a_column_renamed_between_files_is_read_under_its_other_name(tmp_path):
    """layouts35: a logger program's change renamed the flux column from one file on;
    before, the only fix was a copy of the files with one name."""
    frame, ends = _records()
    half = len(frame) // 2
    frame.iloc[:half].to_csv(tmp_path / "a.csv", index=False)
    frame.iloc[half:].rename(columns={"co2": "co2_v2"}).to_csv(tmp_path / "b.csv", index=False)
    paths = [tmp_path / "a.csv", tmp_path / "b.csv"]
    read, report = _read(paths, other_names={"nee": ["co2_v2"]})
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())
    assert report.renamed_columns == {"co2_v2": ("co2", 1)}
    assert report.to_dict()["renamed_columns"] == {"co2_v2": ["co2", 1]}
    with pytest.raises(MissingColumnError, match=r"\[input.other_names\] \(nee = \['co2_v2'\]\)"):
        _read(paths)


def test_a_file_with_both_names_or_an_unmapped_variable_is_refused(tmp_path):
    frame, _ = _records()
    frame.assign(co2_v2=frame["co2"]).to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(InputFileError, match=r"holds 'co2', 'co2_v2'.*which of them is nee"):
        _read(tmp_path / "a.csv", other_names={"nee": ["co2_v2"]})
    with pytest.raises(ConfigError, match=r"no single column is mapped to tsoil"):
        _read(tmp_path / "a.csv", other_names={"tsoil": ["ts2"]})
    with pytest.raises(ConfigError, match=r"'sw' is mapped or the time column"):
        _read(tmp_path / "a.csv", other_names={"nee": ["sw"]})
