"""Tests of fluxpart.io (site TOML and record reader) and fluxpart.coverage.

The CSV files are invented here with known content (known-truth recovery tests of
the reader); outside reference values come from reference/units.toml.
"""

import hashlib
import re

import numpy as np
import pandas as pd
import pytest
from conftest import load_reference

from fluxpart import Site
from fluxpart.coverage import COVERAGE_COLUMNS, coverage_table, format_check
from fluxpart.errors import (
    ConfigError,
    DuplicateTimestampError,
    FluxpartError,
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
    UnitError,
)
from fluxpart.io import (
    IMPLAUSIBLE_SHARE,
    ReadReport,
    SiteConfig,
    read_config,
    read_input,
    read_site_config,
    read_table,
)
from fluxpart.variables import vpd_from_rh

UNITS = load_reference("units")
FORMAT = "%Y-%m-%d %H:%M"
MAPPING = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
           "ustar": "u_fric"}


def _records(periods=96, start="2021-06-01 00:00", minutes=30, seed=1):
    """Invented tower records on interval starts, file column names of MAPPING."""
    rng = np.random.default_rng(seed)
    starts = pd.date_range(start, periods=periods, freq=f"{minutes}min")
    hour = starts.hour + starts.minute / 60
    daylight = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    return pd.DataFrame({
        "co2_flux": np.round(3 - 15 * daylight + rng.normal(0, 1.5, periods), 3),
        "sw_down": np.round(800 * daylight, 1),
        "t_air": np.round(12 + 8 * daylight + rng.normal(0, 0.3, periods), 2),
        "vpd_air": np.round(2 + 14 * daylight, 2),
        "u_fric": np.round(rng.uniform(0.05, 0.8, periods), 3),
        "rel_hum": np.round(90 - 45 * daylight, 1),
        "t_soil": np.round(10 + rng.normal(0, 0.1, periods), 2),
    }, index=starts)


def _write(path, records, marks="start", minutes=30, time_format=FORMAT, column="stamp"):
    """Write records with stamps at the start, middle or end of their interval."""
    shift = {"start": 0, "middle": minutes / 2, "end": minutes}[marks]
    out = records.copy()
    out.insert(0, column, (records.index + pd.Timedelta(minutes=shift)).strftime(time_format))
    out.to_csv(path, index=False)
    return path


def _read(path, **kwargs):
    options = {"columns": MAPPING, "time_column": "stamp", "time_format": FORMAT}
    options.update(kwargs)
    return read_table(path, **options)


def _site_toml(tmp_path, body_input="", site="", extra="", csv="tower.csv"):
    text = (
        "[site]\nname = \"Hollow Fen\"\nlatitude = -41.3\nlongitude = 172.8\nutc_offset = 12.0\n"
        f"{site}\n"
        f"[input]\npath = \"{csv}\"\ntime_column = \"stamp\"\ntime_format = \"{FORMAT}\"\n"
        f"time_marks = \"end\"\nmissing = [-9999, \"NA\"]\n{body_input}\n"
        "[input.columns]\nnee = \"co2_flux\"\nrg = \"sw_down\"\ntair = \"t_air\"\n"
        "vpd = \"vpd_air\"\nustar = \"u_fric\"\n"
        f"{extra}\n[processing]\nseed = 4\n"
    )
    path = tmp_path / "site.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _sha256(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


# ----------------------------------------------------------------------------- reading


def test_reads_canonical_frame(tmp_path):
    """Canonical names, float64, start stamps named 'time', regular freq, values kept."""
    records = _records()
    frame, report = _read(_write(tmp_path / "t.csv", records))
    assert list(frame.columns) == ["nee", "rg", "tair", "vpd", "ustar"]
    assert all(dtype == np.float64 for dtype in frame.dtypes)
    assert frame.index.name == "time"
    assert frame.index.tz is None
    assert frame.index.freqstr == "30min"
    pd.testing.assert_index_equal(frame.index, records.index, check_names=False)
    np.testing.assert_array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())
    assert isinstance(report, ReadReport)
    assert report.records_read == report.records == 96
    assert report.stamps_inserted == 0
    assert report.warnings == ()


@pytest.mark.parametrize("minutes", [30, 60])
def test_start_middle_end_give_identical_frames(tmp_path, minutes):
    """The same records stamped at start, middle or end of the interval read identically."""
    records = _records(periods=72, minutes=minutes)
    records.iloc[[7, 8], 0] = -9999
    records = records.drop(records.index[[5, 30, 31, 32]])
    frames = {}
    for marks in ("start", "middle", "end"):
        path = _write(tmp_path / f"{marks}.csv", records, marks=marks, minutes=minutes)
        frames[marks], report = _read(path, time_marks=marks)
        assert report.shift_minutes == {"start": 0, "middle": minutes / 2, "end": minutes}[marks]
    pd.testing.assert_frame_equal(frames["start"], frames["middle"], check_freq=True)
    pd.testing.assert_frame_equal(frames["start"], frames["end"], check_freq=True)
    assert frames["end"].index[0] == records.index[0]
    assert len(frames["end"]) == 72 and frames["end"]["nee"].isna().sum() == 6


def test_end_stamp_midnight_belongs_to_previous_day(tmp_path):
    """An end stamp of 00:00 is the interval starting 23:30 the day before (DESIGN.md §3)."""
    records = _records(periods=4, start="2021-06-01 23:00")
    frame, _ = _read(_write(tmp_path / "t.csv", records, marks="end"), time_marks="end")
    assert frame.index[1] == pd.Timestamp("2021-06-01 23:30")


def test_unit_conversion(tmp_path):
    """K, kPa and mg CO2 m-2 s-1 become °C, hPa and µmol m-2 s-1 (SI; IUPAC (m))."""
    records = _records()
    converted = records.copy()
    converted["t_air"] = records["t_air"] + UNITS["temperature"]["kelvin_offset"]
    converted["vpd_air"] = records["vpd_air"] / UNITS["pressure"]["kpa_to_hpa"]
    converted["co2_flux"] = records["co2_flux"] / UNITS["flux"]["mg_co2_in_umol"]
    frame, report = _read(_write(tmp_path / "t.csv", converted),
                          units={"tair": "K", "vpd": "kPa", "nee": "mg CO2 m-2 s-1"})
    np.testing.assert_allclose(frame["tair"], records["t_air"], atol=1e-9)
    np.testing.assert_allclose(frame["vpd"], records["vpd_air"], rtol=1e-12)
    np.testing.assert_allclose(frame["nee"], records["co2_flux"], rtol=1e-5)
    assert report.units == {"nee": "mg CO2 m-2 s-1", "tair": "K", "vpd": "kPa"}


@pytest.mark.parametrize("codes, shown", [("[-9999, true]", "true"), ("[[-9999]]", "[-9999]"),
                                           ("[{ a = 1 }]", "a table {a = 1}")])
def test_a_missing_code_of_another_type_is_shown_as_toml(tmp_path, codes, shown):
    """A code that is neither number nor text is named as the user wrote it in TOML (true,
    not Python's True; TOML v1.0.0 spells booleans in lower case); review, round five."""
    path = _site_toml(tmp_path)
    path.write_text(path.read_text().replace('missing = [-9999, "NA"]', f"missing = {codes}"))
    with pytest.raises(ConfigError) as error:
        read_site_config(path)
    assert str(error.value).startswith(f"[input] missing: code {shown}")
    assert "must be a number or a string, e.g. missing = [-9999, \"NA\"]" in str(error.value)
    assert "True" not in str(error.value)


def test_missing_codes_become_nan(tmp_path):
    """Numeric codes (within tolerance), string codes, 'NaN' and empty cells become NaN."""
    records = _records().astype(object)
    records.iloc[3, 0] = "-9999"
    records.iloc[4, 0] = "-9999.0000001"
    records.iloc[5, 0] = " na "
    records.iloc[6, 0] = ""
    records.iloc[7, 0] = "NaN"
    records.iloc[8, 1] = "-6999.0"
    records.iloc[9, 0] = "-9999.5"  # not a code: a (wild) value, counted as outside range
    path = _write(tmp_path / "t.csv", records)
    frame, report = _read(path, missing=[-9999, -6999, "NA"])
    assert frame["nee"].iloc[3:8].isna().all()
    assert np.isnan(frame["rg"].iloc[8])
    assert frame["nee"].iloc[9] == -9999.5
    assert report.missing_cells["nee"] == 5
    assert report.missing_cells["rg"] == 1
    assert report.outside_range["nee"] == 1
    assert frame["nee"].notna().sum() == 96 - 5


def test_inserted_stamps_reported(tmp_path):
    """Stamps absent from the file come back as NaN rows; count and runs reported."""
    records = _records(periods=96)
    kept = records.drop(records.index[[10, 11, 12, 40]])
    frame, report = _read(_write(tmp_path / "t.csv", kept))
    assert len(frame) == 96
    assert frame.iloc[[10, 11, 12, 40]].isna().all(axis=None)
    assert report.records_read == 92
    assert report.stamps_inserted == 4
    assert report.inserted_runs == 2
    assert report.inserted_ranges[0] == (records.index[10], records.index[12], 3)
    assert report.inserted_ranges[1] == (records.index[40], records.index[40], 1)
    assert "stamps inserted   4 in 2 run(s)" in str(report)


def test_hourly_file(tmp_path):
    """An hourly file gives a 60-minute frequency, inferred or declared."""
    records = _records(periods=48, minutes=60)
    path = _write(tmp_path / "t.csv", records, marks="end", minutes=60)
    frame, report = _read(path, time_marks="end")
    assert frame.index.freqstr == "60min" or frame.index.freq == pd.Timedelta(hours=1)
    assert report.interval_minutes == 60
    assert frame.index[0] == records.index[0]
    frame_declared, _ = _read(path, time_marks="end", interval_minutes=60)
    pd.testing.assert_frame_equal(frame, frame_declared)


def test_hourly_file_declared_half_hourly_inserts_every_other(tmp_path):
    """Declaring 30 min for an hourly file is allowed but the report warns about the gaps."""
    path = _write(tmp_path / "t.csv", _records(periods=48, minutes=60), minutes=60)
    frame, report = _read(path, interval_minutes=30)
    assert report.stamps_inserted == 47
    assert any("inserted as missing" in w for w in report.warnings)


def test_leap_day_kept(tmp_path):
    """29 February 2020 is read as 48 half-hours (Gregorian calendar: 2020 is a leap year)."""
    records = _records(periods=4 * 48, start="2020-02-27 00:00")
    frame, report = _read(_write(tmp_path / "t.csv", records, marks="end"), time_marks="end")
    assert (frame.index.normalize() == pd.Timestamp("2020-02-29")).sum() == 48
    assert report.stamps_inserted == 0


def test_leap_day_absent_from_file_is_inserted(tmp_path):
    """A file that skips 29 February gets those 48 stamps inserted as missing."""
    records = _records(periods=4 * 48, start="2020-02-27 00:00")
    kept = records[records.index.normalize() != pd.Timestamp("2020-02-29")]
    frame, report = _read(_write(tmp_path / "t.csv", kept))
    assert report.stamps_inserted == 48
    assert report.inserted_ranges == ((pd.Timestamp("2020-02-29 00:00"),
                                       pd.Timestamp("2020-02-29 23:30"), 48),)
    assert frame.loc["2020-02-29"].isna().all(axis=None)


def test_multi_year_hourly(tmp_path):
    """Three years of hourly end-stamped records span 2019-2021 with the 2020 leap day."""
    hours = (pd.Timestamp("2022-01-01") - pd.Timestamp("2019-01-01")) // pd.Timedelta(hours=1)
    records = _records(periods=hours, start="2019-01-01 00:00", minutes=60)
    frame, report = _read(_write(tmp_path / "t.csv", records, marks="end", minutes=60),
                          time_marks="end")
    assert len(frame) == (365 + 366 + 365) * 24
    assert sorted(set(frame.index.year)) == [2019, 2020, 2021]
    assert frame.index[-1] == pd.Timestamp("2021-12-31 23:00")


def test_vpd_derived_from_rh(tmp_path):
    """Without a vpd column, vpd = es(tair)(1 - rh/100) and the report says it was derived."""
    records = _records()
    mapping = {k: v for k, v in MAPPING.items() if k != "vpd"} | {"rh": "rel_hum"}
    frame, report = _read(_write(tmp_path / "t.csv", records), columns=mapping)
    np.testing.assert_allclose(frame["vpd"], vpd_from_rh(records["rel_hum"], records["t_air"]))
    assert report.derived == ("vpd",)
    assert "derived" in report.columns["vpd"]
    assert list(frame.columns) == ["nee", "rg", "tair", "vpd", "ustar", "rh"]


def test_empty_vpd_column_beside_rh_names_the_derivation(tmp_path):
    """A mapped VPD column without any value (a probe never installed) beside a working RH:
    the error names the fix that derives VPD from RH and air temperature, which the reader
    does where vpd is not mapped (Magnus form, reference/units.toml); the values derived
    then are those of the file without the column (review, round five)."""
    records = _records()
    records["vpd_air"] = -9999
    path = _write(tmp_path / "t.csv", records)
    with pytest.raises(MissingColumnError, match=r"vpd .*column 'vpd_air' has no value at all.*"
                       r"or remove \[input.columns\] vpd to derive VPD from rh \('rel_hum'\) "
                       r"and tair \('t_air'\)"):
        _read(path, columns=dict(MAPPING) | {"rh": "rel_hum"}, missing=[-9999])
    with pytest.raises(MissingColumnError) as alone:
        _read(path, missing=[-9999])
    assert "derive" not in str(alone.value)
    mapping = {k: v for k, v in MAPPING.items() if k != "vpd"} | {"rh": "rel_hum"}
    frame, _ = _read(path, columns=mapping, missing=[-9999])
    np.testing.assert_allclose(frame["vpd"], vpd_from_rh(records["rel_hum"], records["t_air"]))


def test_rh_as_fraction_declared(tmp_path):
    """RH given as a fraction with its unit declared becomes percent."""
    records = _records()
    records["rel_hum"] = records["rel_hum"] / 100
    mapping = dict(MAPPING) | {"rh": "rel_hum"}
    frame, _ = _read(_write(tmp_path / "t.csv", records), columns=mapping,
                     units={"rh": "fraction"})
    np.testing.assert_allclose(frame["rh"], records["rel_hum"] * 100)


def test_optional_columns_and_canonical_names_found(tmp_path):
    """Optional tsoil and nee_flag are read; a file column with a canonical name needs no entry."""
    records = _records().rename(columns={"u_fric": "ustar"})
    records["qc"] = np.arange(96) % 3
    mapping = {k: v for k, v in MAPPING.items() if k != "ustar"} | {"tsoil": "t_soil",
                                                                     "nee_flag": "qc"}
    frame, report = _read(_write(tmp_path / "t.csv", records), columns=mapping)
    assert list(frame.columns) == ["nee", "rg", "tair", "vpd", "ustar", "tsoil", "nee_flag"]
    assert report.columns["ustar"] == "ustar"
    # the canonical flag: 0 = kept (value in flag_accept, default [0]), 1 = rejected
    np.testing.assert_array_equal(frame["nee_flag"], (records["qc"] != 0).astype(float))


def test_semicolon_delimiter(tmp_path):
    """A ';'-delimited file reads with delimiter=';'; with ',' the error names the fix."""
    path = tmp_path / "t.csv"
    records = _records()
    out = records.copy()
    out.insert(0, "stamp", records.index.strftime(FORMAT))
    out.to_csv(path, index=False, sep=";")
    frame, _ = _read(path, delimiter=";")
    assert len(frame) == 96
    with pytest.raises(MissingColumnError, match=r'holding semicolons: set \[input\] delimiter = ";"'):
        _read(path)


def test_input_file_unchanged(tmp_path):
    """Reading never modifies the input file (SHA-256 and mtime before and after)."""
    records = _records().astype(object)
    records.iloc[2, 0] = "-9999"
    path = _write(tmp_path / "t.csv", records.drop(records.index[5]), marks="end")
    before, mtime = _sha256(path), path.stat().st_mtime_ns
    _read(path, time_marks="end")
    toml = _site_toml(tmp_path, csv="t.csv")
    toml_before = _sha256(toml)
    read_config(toml)
    assert _sha256(path) == before and path.stat().st_mtime_ns == mtime
    assert _sha256(toml) == toml_before


def test_blank_lines_do_not_shift_line_numbers(tmp_path):
    """Blank lines are skipped, and a later error still names the true line of the file."""
    path = _write(tmp_path / "t.csv", _records(periods=6))
    lines = path.read_text().splitlines()
    lines.insert(3, "")
    lines[5] = lines[5].replace("2021-06-01", "2021-13-01", 1)
    path.write_text("\n".join(lines) + "\n\n")
    with pytest.raises(TimestampError, match=r"line 6 of '.*t.csv'"):
        _read(path)
    lines[5] = lines[5].replace("2021-13-01", "2021-06-01", 1)
    path.write_text("\n".join(lines) + "\n\n")
    frame, report = _read(path)
    assert report.records_read == 6 and len(frame) == 6


# ----------------------------------------------------------------------------- site TOML


def test_read_config_resolves_relative_path(tmp_path):
    """read_config reads [site] and the CSV relative to the TOML file."""
    _write(tmp_path / "tower.csv", _records(), marks="end")
    frame, site = read_config(_site_toml(tmp_path))
    assert site == Site(name="Hollow Fen", latitude=-41.3, longitude=172.8, utc_offset=12.0)
    assert len(frame) == 96 and frame.index[0] == pd.Timestamp("2021-06-01 00:00")


def test_read_site_config_and_read_input(tmp_path):
    """read_site_config keeps every setting; read_input gives frame and report."""
    _write(tmp_path / "tower.csv", _records(), marks="end")
    site_config = read_site_config(_site_toml(tmp_path, body_input="interval_minutes = 30"))
    assert isinstance(site_config, SiteConfig)
    assert site_config.input_path == tmp_path / "tower.csv"
    assert site_config.time_marks == "end"
    assert site_config.missing == (-9999, "NA")
    assert site_config.interval_minutes == 30
    assert site_config.document["processing"] == {"seed": 4}
    frame, report = read_input(site_config)
    assert report.interval_minutes == 30 and report.time_marks == "end"
    assert report.source.endswith("tower.csv")


@pytest.mark.parametrize(("where", "text", "pattern"), [
    ("top", "[sites]\nx = 1\n", r"\[sites\] is unknown; did you mean 'site'"),
    ("site", "lattitude = 3.0\n", r"\[site\] lattitude is unknown; did you mean 'latitude'"),
    ("input", "time_colum = \"x\"\n", r"\[input\] time_colum is unknown; did you mean "
                                      r"'time_column'"),
    ("columns", "ustr = \"x\"\n", r"\[input.columns\] ustr is not a canonical variable; did "
                                  r"you mean 'ustar'"),
    # fresh-eyes campaign: the case slip got the whole list twice, the misplaced or misspelt
    # table a list of 'settings'
    ("columns", "VPD = \"x\"\n", r"VPD is not a canonical variable; did you mean 'vpd'\? "
                                   r"\(names are case-sensitive\)$"),
    ("top", "[units]\nvpd = \"kPa\"\n", r"the table \[units\] belongs under \[input\]: write "
                                      r"it as \[input.units\]"),
    ("top", "[input.column]\nnee = \"x\"\n", r"table \[input.column\] is unknown; did you mean "
                                           r"\[input.columns\]\?"),
])
def test_unknown_keys_suggest_nearest(tmp_path, where, text, pattern):
    """Unknown tables and keys raise ConfigError suggesting the nearest valid key."""
    if where == "top":
        path = _site_toml(tmp_path)
        path.write_text(path.read_text() + text)
    elif where == "site":
        path = _site_toml(tmp_path, site=text)
    elif where == "input":
        path = _site_toml(tmp_path, body_input=text)
    else:
        path = _site_toml(tmp_path, extra="")
        path.write_text(path.read_text().replace("[processing]", text + "[processing]"))
    with pytest.raises(ConfigError, match=pattern):
        read_site_config(path)


@pytest.mark.parametrize(("line", "owner"), [("latitude = -41.3", "[site]"),
                                             ("path = \"tower.csv\"", "[input]"),
                                             ("seed = 3", "[processing]"),
                                             ("lattitude = 1", "the table it belongs to")])
def test_key_above_the_first_table_is_named_with_its_table(tmp_path, line, owner):
    """A key written above the first [table] header belongs to no table (TOML v1.0.0,
    "Table": keys before the first header are in the root table). It was reported as an
    unknown "top-level table [latitude]"; now the key, its value and the table it belongs
    to are named (review, round five)."""
    path = _site_toml(tmp_path)
    path.write_text(line + "\n" + path.read_text())
    key = line.split(" = ")[0]
    with pytest.raises(ConfigError, match=rf"^site config: {key} = .* stands above the first "
                       rf"\[table\] header, outside any table: move it under "
                       + re.escape(owner)):
        read_site_config(path)


@pytest.mark.parametrize(("where", "line", "owner"),
                         [("site", "seed = 3", "processing"),
                          ("site", "time_zone = \"Pacific/Auckland\"", "input"),
                          ("input", "canopy = \"tall\"", "site"),
                          ("input", "year_start = \"07-01\"", "processing"),
                          ("processing", "canopy = \"tall\"", "site"),
                          ("processing", "missing = [-7999]", "input")])
def test_setting_in_another_table_is_named_with_its_table(tmp_path, where, line, owner):
    """A setting written under the wrong table (seed under [site], canopy under
    [processing]) was called unknown with a list of the table's keys, as if misspelt;
    now its table is named (review round seven)."""
    from fluxpart.config import Config

    if where == "processing":
        path = _site_toml(tmp_path)
        path.write_text(path.read_text() + line + "\n")
        read = Config.from_toml
    else:
        path = _site_toml(tmp_path, **{"site" if where == "site" else "body_input": line})
        read = read_site_config
    key = line.split(" = ")[0]
    with pytest.raises(ConfigError, match=rf"^\[{where}\] {key} = .*: {key} belongs under "
                       rf"\[{owner}\], not \[{where}\]: move it there"):
        read(path)


@pytest.mark.parametrize(("key", "line"), [("utc_offset", "utc_offset = 12.0"),
                                         ("time_marks", "time_marks = \"end\"")])
def test_required_key_under_processing_is_named_there(tmp_path, key, line):
    """A required [site] or [input] key moved under [processing] was refused as missing
    from its own table ("[site] utc_offset is missing"), as if never written: now the
    refusal names where it stands and where it belongs (round mistakes56; the TOML tables
    of our own config layout, common practice)."""
    path = _site_toml(tmp_path)
    text = path.read_text().replace(line + "\n", "")
    assert key not in text
    path.write_text(text + line + "\n")
    with pytest.raises(ConfigError, match=rf"^\[processing\] {key} = .*: {key} belongs under "
                       r"\[(site|input)\], not \[processing\]: move it there"):
        read_site_config(path)


@pytest.mark.parametrize(("where", "line", "pattern"), [
    ("input", 'flag_accept = [0, "OK"]', r"as numbers or as words, not both"),
    ("columns", 'tsoil = ["t_soil_5", "t_soil_10"]',
     r"expected one column name; only nee_flag takes a list of columns")])
def test_text_flag_values_and_a_list_for_one_variable_say_why(tmp_path, where, line,
                                                               pattern):
    """flag_accept = ["OK"] was refused as "expected a list of the flag values" (it is
    one), and a list of two columns for one variable as "expected a non-empty string";
    each now says what the setting takes (review round seven). Since layouts49 a list of
    words is read (flags written as words); a list mixing numbers and words is named."""
    if where == "input":
        path = _site_toml(tmp_path, body_input=line)
    else:
        path = _site_toml(tmp_path, extra=line)
    with pytest.raises(ConfigError, match=pattern):
        read_site_config(path)


def test_site_latitude_out_of_range(tmp_path):
    """A latitude beyond ±90 is a ConfigError naming [site] latitude."""
    path = _site_toml(tmp_path)
    path.write_text(path.read_text().replace("latitude = -41.3", "latitude = -141.3"))
    with pytest.raises(ConfigError, match=r"\[site\] latitude = -141.3 is out of range"):
        read_site_config(path)


@pytest.mark.parametrize(("old", "new", "error", "pattern"), [
    ("utc_offset = 12.0\n", "", ConfigError, r"\[site\] utc_offset is missing"),
    ("time_marks = \"end\"\n", "", ConfigError, r"\[input\] time_marks is missing.*start"),
    ("time_marks = \"end\"", "time_marks = \"ending\"", ConfigError,
     r'time_marks = "ending": expected one of "start", "middle", "end"; did you mean "end"'),
    ("missing = [-9999, \"NA\"]", "missing = [true]", ConfigError, r"\[input\] missing"),
    ("missing = [-9999, \"NA\"]", "interval_minutes = 15", ConfigError,
     r"interval_minutes = 15: expected 30 or 60"),
    ("missing = [-9999, \"NA\"]", "delimiter = \";;\"", ConfigError, r'delimiter = ";;"'),
    ("path = \"tower.csv\"", "path = 3", ConfigError, r"\[input\] path = 3"),
    ("ustar = \"u_fric\"", "ustar = \"t_air\"", ConfigError,
     r"file column 't_air' is mapped twice, to tair and to ustar"),
    ("[processing]", "[input.units]\nvpd = \"atm\"\n[processing]", UnitError,
     r'\[input.units\] vpd = "atm".*"kPa"'),
    ("[processing]", "[input.units]\nvdp = \"kPa\"\n[processing]", ConfigError,
     r"\[input.units\] vdp.*did you mean 'vpd'"),
])
def test_bad_settings(tmp_path, old, new, error, pattern):
    """Each bad [site]/[input] setting raises its error naming the setting."""
    path = _site_toml(tmp_path)
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))
    with pytest.raises(error, match=pattern):
        read_site_config(path)


def test_missing_toml_and_invalid_toml(tmp_path):
    """A missing site config is InputFileError; broken TOML a ConfigError naming the file."""
    with pytest.raises(InputFileError, match="absent.toml.*does not exist"):
        read_site_config(tmp_path / "absent.toml")
    bad = tmp_path / "bad.toml"
    bad.write_text("[site\n")
    with pytest.raises(ConfigError, match="bad.toml.*not valid TOML"):
        read_site_config(bad)


def test_unit_for_unread_variable(tmp_path):
    """A unit declared for a variable that is not read is a ConfigError."""
    path = _write(tmp_path / "t.csv", _records())
    with pytest.raises(ConfigError, match=r'\[input.units\] tsoil = "K" is given but no tsoil'):
        _read(path, units={"tsoil": "K"})


# ----------------------------------------------------------------------------- bad files


def test_input_file_named_in_other_case_is_hinted(tmp_path):
    """A path that differs from the file's name only in letter case names the file."""
    _write(tmp_path / "m39.csv", _records(periods=4))
    with pytest.raises(InputFileError, match=r"M39.CSV.*does not exist; the folder has "
                                             r"'m39.csv', which differs only in upper and lower"):
        _read(tmp_path / "M39.CSV")


def test_case_hint_names_the_first_of_several_in_sorted_order(tmp_path):
    """Three files differ from the path only in case: the message names the first sorted."""
    for name in ("m39.csv", "M39.csv", "m39.Csv"):
        _write(tmp_path / name, _records(periods=4))
    with pytest.raises(InputFileError, match=r"the folder has 'M39.csv', which differs"):
        _read(tmp_path / "m39.CSV")


def test_input_file_missing(tmp_path):
    """A missing record file names the path and the setting."""
    with pytest.raises(InputFileError, match=r"\[input\] path.*nothing.csv.*does not exist"):
        _read(tmp_path / "nothing.csv")
    # a name of 300 bytes, beyond NAME_MAX (255 bytes on Linux ext4/tmpfs, macOS APFS;
    # common practice): pathlib's exists() raised OSError ENAMETOOLONG, a traceback under
    # `fluxpart batch` (review round thirteen)
    with pytest.raises(InputFileError, match=r"\[input\] path.*cannot be looked up"):
        _read(tmp_path / ("a" * 300 + ".csv"))
    _site_toml(tmp_path)
    with pytest.raises(InputFileError, match="tower.csv"):
        read_config(tmp_path / "site.toml")


def test_empty_file_and_header_only(tmp_path):
    """An empty file and a header without records are InputFileErrors."""
    empty = tmp_path / "empty.csv"
    empty.write_text("")
    with pytest.raises(InputFileError, match="empty.csv.*is empty"):
        _read(empty)
    header = tmp_path / "header.csv"
    header.write_text("stamp,co2_flux,sw_down,t_air,vpd_air,u_fric\n")
    with pytest.raises(InputFileError, match="header.csv.*no records"):
        _read(header)


def test_rows_after_header_past_the_records_is_named(tmp_path):
    """rows_after_header larger than the file's records names the setting."""
    path = _write(tmp_path / "t.csv", _records(periods=4))
    with pytest.raises(InputFileError, match=r"t.csv' has a header but no records after the 9 "
                                             r"line\(s\) of rows_after_header"):
        _read(path, rows_after_header=9)


def test_missing_column_lists_file_columns(tmp_path):
    """A mapped column absent from the file names the entry, a near name and the columns."""
    path = _write(tmp_path / "t.csv", _records().rename(columns={"u_fric": "u_frict"}))
    with pytest.raises(MissingColumnError,
                       match=r'\[input.columns\] ustar = "u_fric".*did you mean \'u_frict\'.*'
                             r"the file has columns: 'stamp', 'co2_flux'"):
        _read(path)


def test_required_variable_not_mapped(tmp_path):
    """A required variable neither mapped nor present by name is a MissingColumnError."""
    path = _write(tmp_path / "t.csv", _records())
    mapping = {k: v for k, v in MAPPING.items() if k != "rg"}
    with pytest.raises(MissingColumnError, match=r"\[input.columns\] rg is not mapped.*'sw_down'"):
        _read(path, columns=mapping)
    mapping = {k: v for k, v in MAPPING.items() if k != "vpd"}
    with pytest.raises(MissingColumnError, match=r"vpd is not mapped.*or map rh"):
        _read(path, columns=mapping)


def test_time_column_missing(tmp_path):
    """A wrong time column names [input] time_column."""
    path = _write(tmp_path / "t.csv", _records(), column="logger_stamp")
    with pytest.raises(MissingColumnError, match=r'\[input\] time_column = "stamp"'):
        _read(path)


def test_duplicate_header(tmp_path):
    """A mapped column name that appears twice in the header is an InputFileError."""
    path = _write(tmp_path / "t.csv", _records().rename(columns={"t_soil": "t_air"}))
    with pytest.raises(InputFileError, match=r"column 't_air' \(for tair\) appears more than once"):
        _read(path)


def test_unparsable_timestamp_names_row(tmp_path):
    """The first bad stamp is named by data row, line, text and format."""
    path = _write(tmp_path / "t.csv", _records())
    text = path.read_text().splitlines()
    text[3] = "2021/06/01 01:00" + text[3][16:]
    text[7] = "garbage" + text[7][16:]
    path.write_text("\n".join(text) + "\n")
    with pytest.raises(TimestampError, match=r"line 4 of '.*t.csv' has stamp "
                                             r"'2021/06/01 01:00'.*\"%Y-%m-%d %H:%M\"; 2 stamp"):
        _read(path)


def test_hour_24_is_next_midnight(tmp_path):
    """Hour 24:00 is midnight ending the day (ISO 8601 allows 24:00 as end of day)."""
    records = _records(periods=6, start="2021-06-01 22:00")
    path = _write(tmp_path / "t.csv", records, marks="end")
    text = path.read_text().replace("2021-06-02 00:00", "2021-06-01 24:00")
    path.write_text(text)
    frame, report = _read(path, time_marks="end")
    plain, _ = _read(_write(tmp_path / "plain.csv", records, marks="end"), time_marks="end")
    pd.testing.assert_frame_equal(frame, plain)
    assert report.stamp_conversions["hour_24"] == 1
    assert "hour-24" in str(report)


def test_timestamps_with_utc_offset_rejected(tmp_path):
    """Stamps that carry an offset are rejected: the frame is local standard time."""
    records = _records(periods=4)
    path = _write(tmp_path / "t.csv", records, time_format="%Y-%m-%dT%H:%M+01:00")
    with pytest.raises(TimestampError, match="UTC offset"):
        _read(path, time_format="ISO8601")


def test_exact_duplicate_rows_dropped_and_counted(tmp_path):
    """Byte-identical repeated rows (issue 13) are dropped with a count, not an error."""
    records = _records(periods=10)
    repeated = pd.concat([records.iloc[:5], records.iloc[[4]], records.iloc[5:],
                          records.iloc[7:9]])
    frame, report = _read(_write(tmp_path / "t.csv", repeated))
    plain, _ = _read(_write(tmp_path / "plain.csv", records))
    pd.testing.assert_frame_equal(frame, plain)
    assert report.duplicate_rows == 3 and report.records_read == 13
    assert "3 exact duplicate(s)" in str(report)


def test_conflicting_duplicate_stamp_names_lines(tmp_path):
    """A repeated stamp with different values names the stamp and both lines; no DST blame
    in June."""
    records = _records(periods=10)
    repeated = pd.concat([records.iloc[:5], records.iloc[[4]], records.iloc[5:]])
    repeated.iloc[5, 0] += 1.0
    path = _write(tmp_path / "t.csv", repeated)
    with pytest.raises(DuplicateTimestampError,
                       match=r"stamp '2021-06-01 02:00' occurs 2 times with different values "
                             r"in '.*t.csv' \(lines 6, 7\)") as caught:
        _read(path)
    assert "daylight" not in str(caught.value)


def test_non_monotonic_names_row(tmp_path):
    """Stamps going backwards name the row and both stamps."""
    records = _records(periods=10)
    swapped = records.iloc[[0, 1, 2, 4, 3, 5, 6, 7, 8, 9]]
    with pytest.raises(NonMonotonicTimestampError,
                       match=r"line 6 of '.*t.csv': '2021-06-01 01:30' comes "
                             r"after '2021-06-01 02:00'"):
        _read(_write(tmp_path / "t.csv", swapped))


def test_ten_minute_records_rejected(tmp_path):
    """10-minute spacing is a SpacingError saying what was found."""
    path = _write(tmp_path / "t.csv", _records(periods=30, minutes=10))
    with pytest.raises(SpacingError, match=r"most common spacing between stamps is 10 minutes"):
        _read(path)


def test_irregular_step_rejected(tmp_path):
    """A step that is not a multiple of the interval names the rows and the spacing."""
    records = _records(periods=20)
    index = records.index.to_series()
    index.iloc[8:] = index.iloc[8:] + pd.Timedelta(minutes=17)
    records.index = pd.DatetimeIndex(index)
    with pytest.raises(SpacingError, match=r"47 minutes apart at line 10 of '.*t.csv'"):
        _read(_write(tmp_path / "t.csv", records))
    with pytest.raises(SpacingError, match=r"not a whole multiple of the 60-minute"):
        _read(tmp_path / "t.csv", interval_minutes=60)


def test_single_record(tmp_path):
    """One record cannot show its spacing unless interval_minutes is given."""
    path = _write(tmp_path / "t.csv", _records(periods=1))
    with pytest.raises(SpacingError, match="interval_minutes"):
        _read(path)
    frame, _ = _read(path, interval_minutes=30)
    assert len(frame) == 1 and frame.index.freqstr == "30min"


def test_non_numeric_cell_names_column_and_row(tmp_path):
    """A text cell in a data column names the column, variable, row and a fix."""
    records = _records().astype(object)
    records.iloc[6, 2] = "ERR"
    with pytest.raises(InputFileError, match=r"column 't_air' \(tair\): line 8 of "
                                             r"'.*t.csv' has 'ERR'.*add it to \[input\] "
                                             "missing"):
        _read(_write(tmp_path / "t.csv", records))


def test_decimal_comma_hint(tmp_path):
    """A decimal comma in a ';' file is named as such."""
    records = _records().astype(object)
    records.iloc[2, 1] = "12,5"
    path = tmp_path / "t.csv"
    out = records.copy()
    out.insert(0, "stamp", _records().index.strftime(FORMAT))
    out.to_csv(path, index=False, sep=";")
    with pytest.raises(InputFileError, match=r"'sw_down' \(rg\): line 4 .*decimal comma.*"
                                             r"decimal = \",\""):
        _read(path, delimiter=";")


def test_unknown_unit(tmp_path):
    """An unknown unit raises UnitError listing the accepted units."""
    path = _write(tmp_path / "t.csv", _records())
    with pytest.raises(UnitError, match=r'\[input.units\] tair = "F".*"K"'):
        _read(path, units={"tair": "F"})


def test_time_marks_invalid(tmp_path):
    """An invalid time_marks lists the valid choices."""
    path = _write(tmp_path / "t.csv", _records())
    with pytest.raises(ConfigError, match=r'time_marks = "begin".*"start", "middle", "end"'):
        _read(path, time_marks="begin")


def test_column_mapped_twice(tmp_path):
    """Two canonical variables mapped to one file column is a ConfigError."""
    path = _write(tmp_path / "t.csv", _records())
    with pytest.raises(ConfigError, match=r"'t_air' is mapped twice, to tair and to tsoil"):
        _read(path, columns=dict(MAPPING) | {"tsoil": "t_air"})


def test_off_grid_stamps_refused(tmp_path):
    """Middle stamps declared as end stamps land at minute 45. Every record so is two
    readings (middle stamps, or a clock 15 minutes off), refused naming both since
    round layouts22 (it was warned about)."""
    path = _write(tmp_path / "t.csv", _records(), marks="middle")
    with pytest.raises(TimestampError, match=r'minute 45 .*set time_marks = "middle"; or '
                                             r"the logger's clock ran 15 minutes off"):
        _read(path, time_marks="end")
    # the warning of a file partly off the grid: tests/test_robustness_layouts22.py


# ----------------------------------------------------------------------------- plausibility


def test_kelvin_declared_celsius(tmp_path):
    """Temperatures near 285 read as °C stop the reader with the kelvin hint."""
    records = _records()
    records["t_air"] = records["t_air"] + UNITS["temperature"]["kelvin_offset"]
    with pytest.raises(ImplausibleValueError, match=r"'t_air' \(tair.*look like 'K'.*"
                                                    r"\[input.units\] tair = \"K\""):
        _read(_write(tmp_path / "t.csv", records))


def test_celsius_declared_kelvin(tmp_path):
    """Temperatures in °C declared as K stop the reader and suggest °C."""
    with pytest.raises(ImplausibleValueError, match=r"tair, read as 'K'.*look like '°C'"):
        _read(_write(tmp_path / "t.csv", _records()), units={"tair": "K"})


def test_hpa_declared_kpa(tmp_path):
    """VPD in hPa declared kPa (x10 too large) stops the reader and suggests hPa."""
    records = _records()  # vpd 2..16 hPa, read as 20..160 hPa
    with pytest.raises(ImplausibleValueError, match=r"vpd, read as 'kPa'.*look like 'hPa'"):
        _read(_write(tmp_path / "t.csv", records), units={"vpd": "kPa"})


def test_pa_declared_hpa(tmp_path):
    """VPD in Pa read as hPa stops the reader and suggests Pa."""
    records = _records()
    records["vpd_air"] = records["vpd_air"] * 100
    with pytest.raises(ImplausibleValueError, match=r"vpd, read as 'hPa'.*look like 'Pa'"):
        _read(_write(tmp_path / "t.csv", records))


def test_relative_humidity_mapped_as_vpd_is_named_not_offered_pa(tmp_path):
    """RH in % (45-90) in the VPD column, read as hPa, exceeds the saturation vapour
    pressure at 12-20 degC (14.0-23.4 hPa, Magnus form, WMO-No. 8 (m)); read as Pa it
    would be a deficit below 1 hPa, an air near saturation all day. The refusal named
    'Pa' as the fix (round mistakes44); it names a relative humidity now."""
    records = _records()
    records["vpd_air"] = records["rel_hum"]
    with pytest.raises(ImplausibleValueError, match=r"vpd, read as 'hPa'.*look like a "
                       r"relative humidity in %") as caught:
        _read(_write(tmp_path / "t.csv", records))
    assert "'Pa'" not in str(caught.value)


def test_desert_vpd_in_hpa_declared_kpa_is_offered_hpa_not_named_humidity(tmp_path):
    """A hot desert's VPD in hPa (air 28-44 degC, RH 10-26 %: e_s(T)(1 - RH) of the
    Magnus form, WMO-No. 8 (m), 31-82 hPa, median about 49) lies within 0-100 with a
    median above 30, as an RH in % does; read as kPa it was named a relative humidity
    (review55). It rises as the air warms, which an RH at a steady vapour pressure does
    not (RH = e / e_s(T); Monteith & Unsworth 2013 (m)), so hPa is offered."""
    records = _records()
    warm = (records["t_air"] - 12.0) / 8.0                 # 0 at night, 1 at noon
    records["t_air"] = np.round(28.0 + 16.0 * warm, 2)
    saturation = 6.112 * np.exp(17.62 * records["t_air"] / (243.12 + records["t_air"]))
    records["vpd_air"] = np.round(saturation * (1.0 - (0.26 - 0.16 * warm)), 2)
    assert 30.0 < np.median(records["vpd_air"]) and records["vpd_air"].max() < 100.0
    with pytest.raises(ImplausibleValueError, match=r"vpd, read as 'kPa'.*look like "
                       r"'hPa'") as caught:
        _read(_write(tmp_path / "t.csv", records), units={"vpd": "kPa"})
    assert "relative humidity" not in str(caught.value)


def test_rh_fraction_declared_percent(tmp_path):
    """RH that never exceeds 1.05 % is a fraction: error with the fix."""
    records = _records()
    records["rel_hum"] = records["rel_hum"] / 100
    mapping = dict(MAPPING) | {"rh": "rel_hum"}
    with pytest.raises(ImplausibleValueError, match=r"rh = \"fraction\""):
        _read(_write(tmp_path / "t.csv", records), columns=mapping)


def test_undeclared_missing_code_hint(tmp_path):
    """A frequent undeclared code (here -6999) stops the reader and suggests [input] missing."""
    records = _records()
    records.iloc[::4, 1] = -6999
    with pytest.raises(ImplausibleValueError, match=r"the value -6999 alone occurs 24 times.*"
                                                    r"\[input\] missing"):
        _read(_write(tmp_path / "t.csv", records))


def test_isolated_outliers_are_counted_not_fatal(tmp_path):
    """Outliers below the 5 % rule are counted in the report and left for screening."""
    records = _records(periods=200)
    records.iloc[[5, 50, 120], 0] = [250.0, -400.0, 180.0]  # 1.5 % of nee
    frame, report = _read(_write(tmp_path / "t.csv", records))
    assert IMPLAUSIBLE_SHARE == 0.05
    assert report.outside_range["nee"] == 3
    assert frame["nee"].iloc[50] == -400.0
    assert any(w.startswith("nee: 3 value(s) outside") for w in report.warnings)


def test_substantial_share_outside_is_fatal(tmp_path):
    """More than 5 % of values outside the range stops the reader with counts and median."""
    records = _records(periods=100)
    records.iloc[:8, 4] = 7.5  # ustar 7.5 m s-1 in 8 % of records
    with pytest.raises(ImplausibleValueError, match=r"'u_fric' \(ustar.*8 of 100 present "
                                                    r"values \(8.0 %\)"):
        _read(_write(tmp_path / "t.csv", records))


def test_cold_dry_winter_is_legitimate(tmp_path):
    """A high-latitude winter record (tair -35..-15 °C, vpd < 1 hPa) raises nothing."""
    records = _records(periods=480, start="2021-01-05")
    rng = np.random.default_rng(3)
    records["t_air"] = np.round(rng.uniform(-35, -15, 480), 2)
    records["vpd_air"] = np.round(rng.uniform(0.02, 0.9, 480), 3)
    records["sw_down"] = np.round(np.clip(records["sw_down"] / 8, 0, None), 1)
    records["co2_flux"] = np.round(rng.normal(0.4, 0.3, 480), 3)
    frame, report = _read(_write(tmp_path / "t.csv", records))
    # near -25 °C es is about 0.8 hPa (CRC/WMO Magnus (m)), so vpd/es spans most of 0..1
    assert not any("vpd" in w for w in report.warnings)
    assert len(frame) == 480


def test_kpa_read_as_hpa_warns(tmp_path):
    """VPD in kPa left as hPa is plausible but suspicious: the report warns."""
    records = _records(periods=200)
    records["vpd_air"] = records["vpd_air"] / 10
    frame, report = _read(_write(tmp_path / "t.csv", records))
    assert any("vpd" in w and "kPa" in w for w in report.warnings)


def test_mg_co2_read_as_micromol_warns(tmp_path):
    """NEE in mg CO2 m-2 s-1 left undeclared is plausible but tiny: the report warns."""
    records = _records(periods=200)
    records["co2_flux"] = (records["co2_flux"] / UNITS["flux"]["mg_co2_in_umol"]).round(4)
    _, report = _read(_write(tmp_path / "t.csv", records))
    assert any("mg CO2 m-2 s-1" in w for w in report.warnings)


def test_errors_are_fluxpart_errors():
    """Every reader error is a FluxpartError and thus a ValueError."""
    for error in (ConfigError, InputFileError, MissingColumnError, TimestampError,
                  DuplicateTimestampError, NonMonotonicTimestampError, SpacingError, UnitError,
                  ImplausibleValueError):
        assert issubclass(error, FluxpartError) and issubclass(error, ValueError)


# ----------------------------------------------------------------------------- coverage


def test_coverage_table_values():
    """Share present, longest gap, first/last present, range and outside counts."""
    index = pd.date_range("2021-01-01", periods=96, freq="30min", name="time")
    nee = np.arange(96, dtype=float)
    nee[:3] = np.nan
    nee[10:58] = np.nan  # 48 records = 1 day
    nee[-1] = 150.0  # outside ±100
    frame = pd.DataFrame({"nee": nee, "rg": np.full(96, np.nan), "other": 1.0}, index=index)
    before = frame.copy()
    table = coverage_table(frame, 30)
    pd.testing.assert_frame_equal(frame, before)
    assert list(table.columns) == list(COVERAGE_COLUMNS)
    assert list(table.index) == ["nee", "rg"]
    row = table.loc["nee"]
    assert row["present"] == 96 - 51
    assert row["present_share"] == pytest.approx(45 / 96)
    assert row["longest_gap_records"] == 48
    assert row["longest_gap_days"] == pytest.approx(1.0)
    assert row["first_present"] == index[3] and row["last_present"] == index[-1]
    assert row["minimum"] == 3.0 and row["maximum"] == 150.0
    assert row["outside_range"] == 1
    empty = table.loc["rg"]
    assert empty["present"] == 0 and empty["longest_gap_records"] == 96
    assert pd.isna(empty["first_present"]) and np.isnan(empty["minimum"])


def test_coverage_hourly_days():
    """With 60-minute records, 24 missing records are one day."""
    index = pd.date_range("2021-01-01", periods=72, freq="60min")
    values = np.ones(72)
    values[24:48] = np.nan
    table = coverage_table(pd.DataFrame({"tair": values}, index=index), 60)
    assert table.loc["tair", "longest_gap_days"] == pytest.approx(1.0)


def test_format_check_text(tmp_path):
    """The check text names site, period, interval, insertions, coverage and problems."""
    records = _records(periods=96)
    records.iloc[[5, 6], 0] = 300.0
    kept = records.drop(records.index[20:24])
    _write(tmp_path / "tower.csv", kept, marks="end")
    site_config = read_site_config(_site_toml(tmp_path))
    frame, report = read_input(site_config)
    text = format_check(site_config.site, report, coverage_table(frame, report.interval_minutes))
    assert "Hollow Fen (latitude -41.3, longitude 172.8, UTC+12 h" in text
    assert "2021-06-01 00:00 .. 2021-06-02 23:30" in text
    assert "interval          30 min" in text
    assert "stamps inserted   4 in 1 run(s)" in text
    assert "2021-06-01 10:00 .. 2021-06-01 11:30 (4 records)" in text
    table_lines = [line for line in text.splitlines() if line.startswith(("variable", "nee "))]
    assert len(table_lines) == 2
    assert table_lines[0].index("present") < table_lines[0].index("longest gap")
    # known truth: the 4 stamps removed in a row are the longest gap, 4 records of 30 min
    # = 0.083 d, and the header says the first number counts records (review25)
    assert "longest gap [records]" in table_lines[0]
    assert " 4 (0.1 d) " in table_lines[1]
    assert "problems found (1)" in text and "nee: 2 value(s) outside" in text
    assert text.endswith("\n")
    assert "nee_flag:" not in text                  # no flag column read, no line on it


def test_format_check_says_what_the_flag_row_counts(tmp_path):
    """A file's flag of 0 (good) and 2 (bad) shows as 0 and 1 in the coverage row, the
    verdict under flag_accept: the check says so beside the table (review43: a tower
    scientist read "max 1" as the file's largest flag value)."""
    records = _records(periods=96)
    frame = records.assign(nee_flag=np.where(np.arange(96) % 5 == 0, 1.0, 0.0))
    site = read_site_config(_site_toml(tmp_path)).site
    text = format_check(site, _FakeReport(), coverage_table(frame, 30))
    lines = text.splitlines()
    row = next(i for i, line in enumerate(lines) if line.startswith("nee_flag "))
    assert lines[row].split()[-2:] == ["1", "0"]    # max 1, none outside
    assert lines[row + 1].startswith("nee_flag: the verdict of the site's flag column(s), "
                                     "0 = kept, 1 = rejected")


class _FakeReport:
    """A reader's report with nothing to say (format_check prints it and its warnings)."""
    warnings = ()

    def __str__(self):
        return "source            tower.csv"


def test_column_without_any_value_warns(tmp_path):
    """A mapped column that is all missing codes is reported, not silently kept."""
    records = _records()
    records["t_soil"] = -9999
    frame, report = _read(_write(tmp_path / "t.csv", records),
                          columns=dict(MAPPING) | {"tsoil": "t_soil"})
    assert frame["tsoil"].isna().all()
    assert any(w.startswith("tsoil: column 't_soil' has no values") for w in report.warnings)


def test_undeclared_missing_code_is_named(tmp_path):
    """Implausible values that are mostly one repeated number are named as a likely code.

    -7999 in air temperature is far below the coldest air on record (-89.2 °C, Vostok
    1983; WMO archive (m)); 20 records of it in 2000 are an undeclared missing code
    (too few to refuse the column, see the refusal's own hint), while a few scattered
    absurd values are not.
    """
    records = _records(periods=2000)
    records.iloc[10:30, records.columns.get_loc("t_air")] = -7999
    records.iloc[40, records.columns.get_loc("t_air")] = -300.5
    frame, report = _read(_write(tmp_path / "t.csv", records), missing=(-9999,))
    # since round layouts55 the code's cells are read as missing, named; the one absurd
    # value left is screening's
    line = next(w for w in report.warnings if w.startswith("tair: the value -7999"))
    assert "alone occurs 20 times" in line and "read as missing" in line
    assert "add it to [input] missing, now [-9999]" in line
    assert frame["tair"].iloc[10:30].isna().all() and frame["tair"].iloc[40] == -300.5
    assert any(w.startswith("tair: 1 value(s) outside") for w in report.warnings)
    scattered = _records(periods=2000)
    scattered.iloc[[5, 50, 70], scattered.columns.get_loc("t_air")] = [-300.5, -400.2, 95.0]
    _, report = _read(_write(tmp_path / "s.csv", scattered), missing=(-9999,))
    line = next(w for w in report.warnings if w.startswith("tair: 3 value(s) outside"))
    assert "missing code" not in line


def test_units_line_under_header_hint(tmp_path):
    """A units line under the header fails on data row 1 with a hint about it."""
    path = _write(tmp_path / "t.csv", _records(periods=4))
    lines = path.read_text().splitlines()
    lines.insert(1, "yyyy-mm-dd HH:MM,umol m-2 s-1,W m-2,degC,hPa,m s-1,%,degC")
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TimestampError, match=r"line 2 of '.*t.csv'.*units line.*"
                                             r"rows_after_header = 1"):
        _read(path)


# ----------------------------------------------------------------------------- layouts (issue 13)
# Each layout is written from the same invented records and must give the same canonical
# frame as the plain file (known-truth recovery of the reader).


def _plain(tmp_path, records, **kwargs):
    frame, _ = _read(_write(tmp_path / "plain.csv", records), **kwargs)
    return frame


def test_several_files_equal_one_file(tmp_path):
    """A list of files with an identical overlap reads as the single file; overlap merged."""
    records = _records(periods=200)
    first = _write(tmp_path / "a.csv", records.iloc[:120])
    second = _write(tmp_path / "b.csv", records.iloc[100:])
    frame, report = _read([second, first])
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    assert report.merged_rows == 20 and report.records_read == 220
    assert len(report.files) == 2 and "identical in overlapping files" in str(report)


def test_optional_column_lacking_in_one_of_several_files_reads_as_missing(tmp_path):
    """A soil temperature in the first file only (a probe added or removed mid-record) is
    read as missing for the second file's records, named in a warning, the summary and the
    manifest's reader record (review 0.12.0, layout c88)."""
    records = _records(periods=200)
    first = _write(tmp_path / "a.csv", records.iloc[:120])
    second = _write(tmp_path / "b.csv", records.iloc[120:].drop(columns="t_soil"))
    frame, report = _read([first, second], columns=MAPPING | {"tsoil": "t_soil"})
    whole = _plain(tmp_path, records, columns=MAPPING | {"tsoil": "t_soil"})
    pd.testing.assert_frame_equal(frame.iloc[:120], whole.iloc[:120], check_freq=False)
    assert frame["tsoil"].iloc[120:].isna().all()
    pd.testing.assert_frame_equal(frame.drop(columns="tsoil"), whole.drop(columns="tsoil"))
    warning = [w for w in report.warnings if w.startswith("tsoil:")]
    assert len(warning) == 1
    assert re.search(r"'t_soil' is in '.*a.csv' but not in '.*b.csv', whose unmapped columns "
                     r"are 'rel_hum'; its 80 record\(s\) there are read as missing tsoil .*; "
                     r"if one of those columns is it renamed, list its name in "
                     r"\[input.other_names\] tsoil, or give it the same name", warning[0])
    assert report.to_dict()["absent_column_records"] == {"tsoil": 80}
    assert re.search(r"not in every file tsoil <- t_soil: absent from '.*b.csv', 80 record",
                     str(report))


def test_required_or_renamed_column_lacking_in_one_file_is_refused_accurately(tmp_path):
    """A required column, a site flag or rh that VPD is derived from, lacking in one of
    several files, is refused naming the files that have it and lack it and the fix; a
    lacking optional column with a similar unmapped one (a rename) is refused with that
    hint; a column already read as another variable is never suggested (review 0.12.0)."""
    records = _records(periods=200).rename(columns={"t_air": "air_temp_c"})
    records["qc"] = 0
    mapping = MAPPING | {"tair": "air_temp_c"}
    first = _write(tmp_path / "a.csv", records.iloc[:120])
    for column, extra, fix in (("co2_flux", {}, r"nee is needed in every record: if one of "
                                                r"them is the same quantity renamed, list "
                                                r"its name in \[input.other_names\] \(nee = "
                                                r"\[.*\]\) or give it the same name in every "
                                                r"file \(in a copy\); "
                                                r"else add the column to '.*b.csv' \(empty "
                                                r"cells where there is no value\)$"),
                               ("qc", {"nee_flag": "qc"}, r"records without the site's flag "
                                                          r"would enter unjudged"),
                               ("rel_hum", {"rh": "rel_hum", "vpd": None}, r"rh is needed")):
        columns = {k: v for k, v in (mapping | extra).items() if v is not None}
        second = _write(tmp_path / "b.csv", records.iloc[120:].drop(columns=column))
        with pytest.raises(MissingColumnError, match=rf"\[input.columns\] \w+ = \"{column}\": "
                                                     rf"the column is in '.*a.csv' but not in "
                                                     rf"'.*b.csv', whose unmapped columns are "
                                                     rf"'.*'; {fix}"):
            _read([first, second], columns=columns)
    second = _write(tmp_path / "b.csv", records.iloc[120:].rename(columns={"t_soil": "T_soil"}))
    with pytest.raises(MissingColumnError, match=r"has an unmapped column of a similar name "
                                                 r"\(did you mean 'T_soil'\?\): a column renamed"):
        _read([first, second], columns=mapping | {"tsoil": "t_soil"})
    with pytest.raises(MissingColumnError, match=r"tsoil = \"soil_temp_5cm\": no such column "
                                                 r"in '.*a.csv'; the file has") as error:
        _read(first, columns=mapping | {"tsoil": "soil_temp_5cm"})
    assert "did you mean" not in str(error.value)
    with pytest.raises(MissingColumnError, match=r"tsoil = \"soil_temp_5cm\": no such column "
                                                 r"in any of the 2 input files"):
        _read([first, second], columns=mapping | {"tsoil": "soil_temp_5cm"})


def test_glob_and_list_in_site_config(tmp_path):
    """[input] path as a glob or a list gives the same frame; the input hash covers all files."""
    records = _records(periods=200)
    _write(tmp_path / "tower_2021a.csv", records.iloc[:100], marks="end")
    _write(tmp_path / "tower_2021b.csv", records.iloc[100:], marks="end")
    _write(tmp_path / "tower.csv", records, marks="end")
    plain = read_site_config(_site_toml(tmp_path))
    globbed = read_site_config(_site_toml(tmp_path, csv="tower_2021*.csv"))
    assert [p.name for p in globbed.input_paths] == ["tower_2021a.csv", "tower_2021b.csv"]
    pd.testing.assert_frame_equal(globbed.read()[0], plain.read()[0])
    listed_path = _site_toml(tmp_path)
    listed_path.write_text(listed_path.read_text().replace(
        'path = "tower.csv"', 'path = ["tower_2021b.csv", "tower_2021a.csv"]'))
    listed = read_site_config(listed_path)
    pd.testing.assert_frame_equal(listed.read()[0], plain.read()[0])
    assert globbed.input_sha256() != plain.input_sha256() == _sha256(tmp_path / "tower.csv")
    with pytest.raises(ConfigError, match=r'\[input\] path = "none_\*.csv" matches no file'):
        read_site_config(_site_toml(tmp_path, csv="none_*.csv"))


def test_double_star_glob_reaches_folders_of_any_depth(tmp_path):
    """Logger files kept in year/month folders: "logger/**/*.csv" reads all of them, as
    "**" does in [batch] sites and in Python's glob with recursive=True (before, "**" was a
    single folder level and matched nothing at two)."""
    records = _records(periods=200)
    _write(tmp_path / "tower.csv", records, marks="end")
    for part, rows in (("2021/05", slice(0, 100)), ("2021/06", slice(100, 200))):
        (tmp_path / "logger" / part).mkdir(parents=True)
        _write(tmp_path / "logger" / part / "tower.csv", records.iloc[rows], marks="end")
    deep = read_site_config(_site_toml(tmp_path, csv="logger/**/*.csv"))
    assert [p.parent.name for p in deep.input_paths] == ["05", "06"]
    pd.testing.assert_frame_equal(deep.read()[0],
                                  read_site_config(_site_toml(tmp_path)).read()[0])


def test_glob_matching_the_site_config_is_refused_naming_it(tmp_path):
    """A pattern as wide as "*" also takes the site config beside the data: refused naming
    the TOML file and the fix. Before, the first TOML was read as a table and the error said
    the time column was not in it ("the file has columns: '[site]'"; review, round five)."""
    _write(tmp_path / "tower.csv", _records(periods=200), marks="end")
    with pytest.raises(ConfigError, match=r'\[input\] path = "\*" matches the TOML file '
                       r"'.*site\.toml' \(1 in all\), which is a config, not a data table: "
                       r'narrow the pattern to the data files'):
        read_site_config(_site_toml(tmp_path, csv="*"))
    assert read_site_config(_site_toml(tmp_path, csv="*.csv")).input_paths[0].name == "tower.csv"


@pytest.mark.parametrize("content", ["", "\n\n", "stamp,co2_flux,sw_down,t_air,vpd_air,u_fric\n"])
def test_empty_file_among_several_is_skipped_and_named(tmp_path, content):
    """A 0-byte, blank or header-only file in a glob (a logger file opened as the power
    failed) is skipped with a warning naming it; the others read as without it (robustness
    leftover 3: it stopped the whole read). Alone, or all empty, it stays an error."""
    records = _records(periods=200)
    first = _write(tmp_path / "a.csv", records.iloc[:100])
    second = _write(tmp_path / "c.csv", records.iloc[100:])
    empty = tmp_path / "b.csv"
    empty.write_text(content)
    frame, report = _read([first, empty, second])
    pd.testing.assert_frame_equal(frame, _read([first, second])[0])
    named = [w for w in report.warnings if "b.csv" in w]
    assert len(named) == 1 and "skipped" in named[0]
    with pytest.raises(InputFileError, match="b.csv"):
        _read(empty)
    other = tmp_path / "d.csv"
    other.write_text("")
    with pytest.raises(InputFileError, match=r"every input file is empty \(2 files, e.g. "
                                             r"'.*b.csv'\)"):
        _read([empty, other])


def test_last_line_cut_short_is_dropped_and_named(tmp_path):
    """A last line with fewer fields than the header (a logger stopped mid-write) is dropped
    with a warning naming file and line: its last value may be cut mid-number ("-0.405" written
    as "-0") and was read before as a measured value (fresh-eyes campaign)."""
    records = _records(periods=200)
    path = _write(tmp_path / "t.csv", records)
    text = path.read_text()
    lines = text.splitlines()
    cut = tmp_path / "cut.csv"
    cut.write_text("\n".join(lines[:-1] + [lines[-1][:25]]))   # no final newline either
    frame, report = _read(cut)
    pd.testing.assert_frame_equal(frame, _read(path)[0].iloc[:-1], check_freq=False)
    named = [w for w in report.warnings if "cut.csv" in w and "last line (201: " in w]
    assert len(named) == 1 and "dropped" in named[0]


def test_last_line_cut_inside_a_quote_is_dropped_and_a_quote_left_open_named(tmp_path):
    """Quoted stamps (as csv writers quote text): a last line cut inside its quote is
    dropped like any cut last line; a quote opened mid-file and never closed is refused
    naming its line (the parser's own message, "EOF inside string", named no line of the
    file; review six of logger layouts)."""
    records = _records(periods=200)
    path = _write(tmp_path / "t.csv", records)
    lines = [f'"{stamp}",{rest}' for stamp, rest in
             (line.split(",", 1) for line in path.read_text().splitlines())]
    quoted = tmp_path / "quoted.csv"
    quoted.write_text("\n".join(lines) + "\n")
    cut = tmp_path / "cut.csv"
    cut.write_text("\n".join(lines + ['"2021-06-05 00:0']))
    frame, report = _read(cut)
    pd.testing.assert_frame_equal(frame, _read(quoted)[0], check_freq=False)
    named = [w for w in report.warnings if "cut.csv" in w and "last line (202: " in w]
    assert len(named) == 1 and "quoted value" in named[0] and "dropped" in named[0]
    plain = path.read_text().splitlines()
    plain[60] = plain[60].replace(",", ',"', 1)          # 'stamp,"3.518,0.0,...'
    opened = tmp_path / "open.csv"
    opened.write_text("\n".join(plain) + "\n")
    with pytest.raises(InputFileError, match=r"'.*open.csv': line 61 \('[^']*'\) opens a quote"):
        _read(opened)


def test_short_line_inside_a_file_is_an_error_naming_it(tmp_path):
    """A line cut short before the last one is refused naming the line, not read as missing
    values (its last value may be cut); a line with too many fields names the line plainly."""
    records = _records(periods=200)
    lines = _write(tmp_path / "t.csv", records).read_text().splitlines()
    short = tmp_path / "short.csv"
    short.write_text("\n".join(lines[:50] + [lines[50][:20]] + lines[51:]) + "\n")
    with pytest.raises(InputFileError, match=r"'.*short.csv': line 51 \('[^']*'\) has 2 fields where the "
                                             r"header has \d+; a record cut short"):
        _read(short)
    long = tmp_path / "long.csv"
    long.write_text("\n".join(lines[:50] + [lines[50] + ",7"] + lines[51:]) + "\n")
    with pytest.raises(InputFileError, match=r"'.*long.csv': line 51 has \d+ fields where the "
                                             r"header has \d+ \(delimiter ','\)"):
        _read(long)


def test_empty_last_cells_are_not_a_cut_line(tmp_path):
    """A last line whose final cells are empty but delimited is complete: nothing dropped."""
    records = _records(periods=200)
    records.iloc[-1, -1] = np.nan
    path = _write(tmp_path / "t.csv", records)
    assert path.read_text().splitlines()[-1].endswith(",")
    frame, report = _read(path)
    assert len(frame) == 200 and not any("cut short" in w for w in report.warnings)


def test_footer_after_the_records_is_dropped_quoted_or_refused(tmp_path):
    """A footer line ("END OF FILE") after the records: as the last line it is dropped with a
    warning quoting it, every record kept; two footer lines are refused naming the first,
    and a footer with every delimiter is dropped naming its line (review 0.12.0, layout
    c54; refused naming its stamp before layouts38)."""
    records = _records(periods=200)
    path = _write(tmp_path / "t.csv", records)
    text = path.read_text()
    footer = tmp_path / "footer.csv"
    footer.write_text(text + "END OF FILE\n")
    frame, report = _read(footer)
    pd.testing.assert_frame_equal(frame, _read(path)[0])
    assert report.records_read == 200
    assert any("last line (202: 'END OF FILE')" in w and "dropped" in w
               for w in report.warnings)
    two = tmp_path / "two.csv"
    two.write_text(text + "END OF FILE\nrecords: 200\n")
    with pytest.raises(InputFileError, match=r"line 202 \('END OF FILE'\) has 1 fields .* "
                                             r"1 such line\(s\) before the last"):
        _read(two)
    # with every delimiter: named its line and stamp and refused before layouts38; now a
    # word for a stamp under the records, dropped with a warning naming its line
    padded = tmp_path / "padded.csv"
    padded.write_text(text + "END OF FILE" + "," * 7 + "\n")
    frame, report = _read(padded)
    pd.testing.assert_frame_equal(frame, _read(path)[0])
    assert any("its last line (202: 'END OF FILE') has a word for a stamp" in w
               for w in report.notes)


def test_header_closed_by_a_delimiter_the_data_lines_lack(tmp_path):
    """A header line ending in a delimiter (an empty last name) over data lines without
    it is read whole and noted in the summary; lines cut short inside it are still
    refused and a cut last line still dropped (review 0.12.0, layout c100)."""
    records = _records(periods=200)
    lines = _write(tmp_path / "t.csv", records).read_text().splitlines()
    closed = tmp_path / "closed.csv"
    closed.write_text("\n".join([lines[0] + ","] + lines[1:]) + "\n")
    frame, report = _read(closed)
    pd.testing.assert_frame_equal(frame, _read(tmp_path / "t.csv")[0])
    assert report.header_trailing_delimiter == 1
    assert "ends with a delimiter the data lines lack" in str(report)
    assert report.to_dict()["header_trailing_delimiter"] == 1
    assert "header_trailing_delimiter" not in _read(tmp_path / "t.csv")[1].to_dict()
    short = tmp_path / "short.csv"
    short.write_text("\n".join([lines[0] + ","] + lines[1:50] + [lines[50][:20]] + lines[51:])
                     + "\n")
    with pytest.raises(InputFileError, match=r"'.*short.csv': line 51 \('[^']*'\) has 2 fields where the "
                                             r"header has 8; a record cut short"):
        _read(short)
    cut = tmp_path / "cut.csv"
    cut.write_text("\n".join([lines[0] + ","] + lines[1:-1] + [lines[-1][:20]]) + "\n")
    frame, report = _read(cut)
    assert len(frame) == 199 and any("last line (201: " in w for w in report.warnings)


def test_conflicting_overlap_names_both_files_and_lines(tmp_path):
    """Overlapping files that disagree: one error naming both files and lines."""
    records = _records(periods=100)
    changed = records.copy()
    changed.iloc[60, 0] += 2.0
    first = _write(tmp_path / "a.csv", records.iloc[:70])
    second = _write(tmp_path / "b.csv", changed.iloc[50:])
    with pytest.raises(DuplicateTimestampError,
                       match=r"stamp 2021-06-02 06:00:00 is on line 62 of '.*a.csv' and on line "
                             r"12 of '.*b.csv' with different values \(nee\)"):
        _read([first, second])


def test_split_date_and_time_columns(tmp_path):
    """time_column as a list: cells joined by one space before time_format applies."""
    records = _records()
    out = records.copy()
    out.insert(0, "date", records.index.strftime("%d.%m.%Y"))
    out.insert(1, "time", records.index.strftime("%H:%M"))
    out.to_csv(tmp_path / "t.csv", index=False)
    frame, _ = _read(tmp_path / "t.csv", time_column=["date", "time"],
                     time_format="%d.%m.%Y %H:%M")
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))


def test_lines_before_header_and_units_line(tmp_path):
    """rows_before_header and rows_after_header skip a title and a units line."""
    records = _records()
    path = _write(tmp_path / "t.csv", records)
    lines = path.read_text().splitlines()
    lines.insert(0, "logger 7, station Quillmoor, program v2")
    lines.insert(2, "yyyy-mm-dd HH:MM,umol m-2 s-1,W m-2,degC,hPa,m s-1,%,degC")
    path.write_text("\n".join(lines) + "\n")
    frame, _ = _read(path, rows_before_header=1, rows_after_header=1)
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    lines[7] = lines[7].replace("2021-06-01", "2021-16-01", 1)
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TimestampError, match=r"line 8 of '.*t.csv'"):
        _read(path, rows_before_header=1, rows_after_header=1)


def test_decimal_comma_and_semicolon(tmp_path):
    """decimal = ',' with delimiter ';' reads the numbers of a comma-decimal export."""
    records = _records()
    out = records.copy()
    out.insert(0, "stamp", records.index.strftime(FORMAT))
    out.to_csv(tmp_path / "t.csv", index=False, sep=";", decimal=",")
    frame, _ = _read(tmp_path / "t.csv", delimiter=";", decimal=",")
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    with pytest.raises(InputFileError, match=r'the header is one cell holding ";" and the '
                                             r'data lines split at their commas: set '
                                             r'\[input\] delimiter = ";"'):
        _read(tmp_path / "t.csv", decimal=",")


def test_decimal_comma_in_quoted_cells_of_a_comma_separated_file(tmp_path):
    """A comma-separated file whose decimal-comma cells are quoted ("0,329"), as a CSV
    writer quotes every cell holding the delimiter (RFC 4180, section 2.6; pandas'
    ``to_csv(decimal=",")`` writes it so), is read with decimal = "," like the
    semicolon file. It was refused as "decimal is also the delimiter" and could not be
    read at all (review, round five). Unquoted, its lines have more fields than the
    header, which is named with the delimiter."""
    records = _records()
    out = records.copy()
    out.insert(0, "stamp", records.index.strftime(FORMAT))
    out.to_csv(tmp_path / "t.csv", index=False, decimal=",")
    assert '"' in (tmp_path / "t.csv").read_text().splitlines()[1]
    frame, _ = _read(tmp_path / "t.csv", decimal=",")
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    (tmp_path / "u.csv").write_text((tmp_path / "t.csv").read_text().replace('"', ""))
    # since layouts30 the unquoted decimal commas are named as the cause
    with pytest.raises(InputFileError, match=r"line 2 .*has \d+ fields where the header has 8.*"
                                             r"must be quoted"):
        _read(tmp_path / "u.csv", decimal=",")


def test_whitespace_delimiter(tmp_path):
    """delimiter = 'whitespace' reads columns separated by runs of blanks."""
    records = _records()
    out = records.copy()
    out.insert(0, "stamp", records.index.strftime("%Y-%m-%dT%H:%M"))
    (tmp_path / "t.txt").write_text(out.to_string(index=False) + "\n")
    frame, _ = _read(tmp_path / "t.txt", delimiter="whitespace", time_format="%Y-%m-%dT%H:%M")
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))


@pytest.mark.parametrize("utc_offset", [10.0, -5.0])
def test_stamps_with_utc_offset_converted(tmp_path, utc_offset):
    """Stamps carrying an offset (UTC or another zone) become local standard time."""
    records = _records()
    site = Site(name="x", latitude=-35.0, longitude=149.0, utc_offset=utc_offset)
    utc = records.index - pd.Timedelta(hours=utc_offset)
    out = records.copy()
    # half the file in UTC ('Z'), half with a +02:00 offset: both are instants
    text = [f"{t:%Y-%m-%dT%H:%M}Z" for t in utc[:48]] + [
        f"{t + pd.Timedelta(hours=2):%Y-%m-%dT%H:%M}+02:00" for t in utc[48:]]
    out.insert(0, "stamp", text)
    out.to_csv(tmp_path / "t.csv", index=False)
    frame, report = _read(tmp_path / "t.csv", time_format="ISO8601", site=site)
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    assert report.stamp_conversions["utc_offset"] == 96
    with pytest.raises(TimestampError, match="carry a UTC offset.*utc_offset"):
        _read(tmp_path / "t.csv", time_format="ISO8601")


def _civil_stamps(starts, zone, utc_offset):
    """Civil clock time in `zone` of standard-time stamps (the standard library's zoneinfo)."""
    utc = (starts - pd.Timedelta(hours=utc_offset)).tz_localize("UTC")
    return utc.tz_convert(zone).tz_localize(None)


# Daylight saving rules (IANA time-zone database, shipped with the system or tzdata):
# central Europe UTC+1, summer time from the last Sunday of March to the last Sunday of
# October (EU Directive 2000/84/EC); New South Wales UTC+10, summer time from the first
# Sunday of October to the first Sunday of April.
@pytest.mark.parametrize(("zone", "utc_offset", "spring", "autumn"), [
    ("Europe/Berlin", 1.0, "2021-03-28 02:00", "2021-10-31 02:00"),
    ("Australia/Sydney", 10.0, "2021-10-03 02:00", "2021-04-04 02:00"),
])
def test_daylight_saving_civil_time(tmp_path, zone, utc_offset, spring, autumn):
    """Civil time with both DST changes gives the standard-time frame; the spring hour is a
    gap, the repeated autumn hour is resolved by record order."""
    first, second = sorted([spring, autumn])
    records = pd.concat([  # three days around each change; the months between are a gap
        _records(periods=144, start=pd.Timestamp(first).normalize() - pd.Timedelta(days=1)),
        _records(periods=144, start=pd.Timestamp(second).normalize() - pd.Timedelta(days=1))])
    civil = _civil_stamps(records.index, zone, utc_offset)
    # the civil clock skips the spring hour and repeats the autumn hour
    assert pd.Timestamp(spring) not in civil
    assert (civil == pd.Timestamp(autumn)).sum() == 2
    out = records.copy()
    out.insert(0, "stamp", civil.strftime(FORMAT))
    out.to_csv(tmp_path / "t.csv", index=False)
    site = Site(name="x", latitude=0.0, longitude=0.0, utc_offset=utc_offset)
    frame, report = _read(tmp_path / "t.csv", time_zone=zone, site=site)
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    summer = int((civil != records.index).sum())
    assert report.stamp_conversions["daylight_saving"] == summer > 0
    # without time_zone the repeated hour stops the reader with the time_zone hint
    with pytest.raises(DuplicateTimestampError, match=r"time_zone = \"Area/City\""):
        _read(tmp_path / "t.csv")
    # a zone of one offset all year (the POSIX-signed Etc zone of the standard offset)
    # reads no repeated hour either: named with the same hint (round mistakes41)
    fixed = f"Etc/GMT{-int(utc_offset):+d}"
    with pytest.raises(DuplicateTimestampError,
                       match=rf"time_zone = \"Area/City\" \(time_zone = \"{fixed}\" keeps one "
                             "offset all year"):
        _read(tmp_path / "t.csv", time_zone=fixed, site=site)


def test_daylight_saving_errors(tmp_path):
    """A stamp in the skipped spring hour, an unknown zone, a zone whose standard offset
    differs from utc_offset: each one error naming the setting."""
    records = _records(periods=96, start="2021-03-27 12:00")
    path = _write(tmp_path / "t.csv", records)  # standard time: 02:00 on 28 March exists
    site = Site(name="x", latitude=50.0, longitude=10.0, utc_offset=1.0)
    with pytest.raises(TimestampError, match=r"line \d+ of '.*t.csv' has stamp '2021-03-28 "
                                             r"02:00', which does not exist in \[input\] "
                                             r'time_zone = "Europe/Berlin"'):
        _read(path, time_zone="Europe/Berlin", site=site)
    with pytest.raises(ConfigError, match=r'time_zone = "Europe/Berlni" is not a known'):
        _read(path, time_zone="Europe/Berlni", site=site)
    with pytest.raises(ConfigError, match=r"standard time UTC\+1 but \[site\] utc_offset = 2"):
        _read(path, time_zone="Europe/Berlin",
              site=Site(name="x", latitude=50.0, longitude=10.0, utc_offset=2.0))


def test_flag_accept_and_two_flag_columns(tmp_path):
    """A 0/1/2 flag with flag_accept = [0, 1] keeps 1; a second flag column also rejects."""
    records = _records()
    records["qc"] = np.arange(96) % 3
    records["qc_gas"] = np.where(np.arange(96) % 10 == 0, 4, 0)
    records.loc[records.index[5], "qc"] = -9999
    path = _write(tmp_path / "t.csv", records)
    frame, report = _read(path, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=[0, 1])
    expected = (records["qc"] == 2).astype(float).where(records["qc"] != -9999)
    np.testing.assert_array_equal(frame["nee_flag"], expected)
    assert report.flag_rejected == 31  # 32 twos, one of them replaced by a missing code
    frame, report = _read(path, columns=MAPPING | {"nee_flag": ["qc", "qc_gas"]},
                          flag_accept=[0, 1])
    expected = ((records["qc"] == 2) | (records["qc_gas"] == 4)).astype(float)
    np.testing.assert_array_equal(frame["nee_flag"], expected)
    assert report.columns["nee_flag"] == "qc + qc_gas"
    with pytest.raises(ConfigError, match=r'\[input\] flag_accept = \["good"\]'):
        _read(path, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=["good"])


def test_the_summary_says_how_many_flagged_records_hold_an_nee_value(tmp_path):
    """`fluxpart check` printed "25 record(s) rejected" by the site flag while its
    screening table counted 17 site_flag records (the example site; review25): screening
    counts a record by its first reason, and a flagged record without NEE is "missing".
    The summary now says how many flagged records hold an NEE value, counted here with
    pandas on the written file (a general-purpose library); the manifest's reader record
    (to_dict) is unchanged."""
    records = _records()
    records["qc"] = np.where(np.arange(96) % 4 == 0, 2, 0)          # 24 flagged
    flux = records["co2_flux"].to_numpy().copy()
    flux[np.arange(96) % 8 == 0] = -9999                             # 12 of them lack NEE
    records["co2_flux"] = flux
    path = _write(tmp_path / "t.csv", records)
    frame, report = _read(path, columns=MAPPING | {"nee_flag": "qc"})
    written = pd.read_csv(path)
    flagged = written["qc"] == 2
    with_nee = int((flagged & (written["co2_flux"] != -9999)).sum())
    assert report.flag_rejected == int(flagged.sum()) == 24
    assert report.flag_rejected_with_nee == with_nee == 12
    assert "24 record(s) rejected, 12 of them with an NEE value" in str(report)
    assert "flag_rejected_with_nee" not in report.to_dict()
    # where every flagged record holds NEE the line stays as it was
    records["co2_flux"] = np.where(flux == -9999, 1.0, flux)
    path = _write(tmp_path / "u.csv", records)
    _, report = _read(path, columns=MAPPING | {"nee_flag": "qc"})
    assert "24 record(s) rejected\n" in str(report) + "\n" and "of them" not in str(report)


def test_a_missing_code_that_is_a_good_flag_value_keeps_the_flag(tmp_path):
    """missing = [-9999, 0] with flag_accept = [0] (mistakes17): missing codes applied to the
    flag column too, so every good 0 read as no flag, and the flag warning blamed
    flag_accept. A value cannot mean both "no value" and "a good record" in the flag's own
    column (a fact of the setting): it stays a missing code of the data columns only."""
    records = _records()
    records["qc"] = np.arange(96) % 3
    records.loc[records.index[7], "co2_flux"] = 0.0
    path = _write(tmp_path / "t.csv", records)
    plain, _ = _read(path, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=[0, 1])
    for missing in ([-9999, 0], [-9999, "0"], 0.0):
        frame, report = _read(path, columns=MAPPING | {"nee_flag": "qc"}, missing=missing,
                              flag_accept=[0, 1])
        np.testing.assert_array_equal(frame["nee_flag"], plain["nee_flag"])
        assert np.isnan(frame["nee"].iloc[7])          # the data column's 0 is missing
        assert any("missing lists 0, which [input] flag_accept keeps" in w
                   for w in report.warnings)
        assert not any("are rejected by" in w for w in report.warnings)
    # a missing code that is not an accepted flag value applies to the flag as before
    frame, _ = _read(path, columns=MAPPING | {"nee_flag": "qc"}, missing=[-9999, 0],
                     flag_accept=[1, 2])
    assert np.isnan(frame["nee_flag"][records["qc"].to_numpy() == 0]).all()


def test_storage_added_to_turbulent_flux(tmp_path):
    """NEE = turbulent flux + storage; a record without storage gets a missing NEE."""
    records = _records()
    storage = np.round(np.sin(np.arange(96) / 7.0), 3)
    twin = records.copy()
    twin["co2_flux"] = records["co2_flux"] + storage
    records["co2_turb"] = records.pop("co2_flux")
    records["sc"] = storage
    records.loc[records.index[10], "sc"] = -9999
    frame, report = _read(_write(tmp_path / "t.csv", records),
                          columns=MAPPING | {"nee": "co2_turb", "storage": "sc"})
    expected = _plain(tmp_path, twin)
    expected.loc[expected.index[10], "nee"] = np.nan
    pd.testing.assert_frame_equal(frame, expected, atol=1e-9)
    assert report.storage_missing == 1 and "storage" not in frame.columns
    assert report.columns["nee"] == "co2_turb + sc (storage)"


@pytest.mark.parametrize("already_included", [False, True])
def test_flux_holding_storage_already_is_named_when_storage_is_added(tmp_path,
                                                                     already_included):
    """The reader adds the storage column to the flux mapped as nee (NEE = turbulent
    flux + storage, Finnigan 2006); where that flux already holds the storage term, it is
    counted twice, and the reader's warning names both columns. Invented records from
    the mass balance of the air below the sensor (the storage term S = NEE - F, F the
    store vented as u* allows); 120 days, so the night-to-night trade is resolved."""
    rng = np.random.default_rng(3)
    days = 120
    starts = pd.date_range("2021-04-01", periods=days * 48, freq="30min")
    hour = (starts.hour + starts.minute / 60).to_numpy()
    light = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    nee = 3.0 - 15 * light + np.repeat(rng.normal(0, 0.5, days), 48)
    vented = np.clip(np.repeat(rng.gamma(2.0, 0.5, days), 48) * (0.2 + 0.4 * light), 0, 0.9)
    store, turbulent = 0.0, np.empty(nee.size)
    for i, exchange in enumerate(nee):
        store += exchange
        turbulent[i] = vented[i] * store
        store -= turbulent[i]
    storage = nee - turbulent
    flux = nee if already_included else turbulent
    records = pd.DataFrame({
        "co2_turb": np.round(flux + rng.normal(0, 1.0, nee.size), 3),
        "sc": np.round(storage, 3), "sw_down": np.round(800 * light, 1),
        "t_air": np.round(12 + 8 * light, 2), "vpd_air": np.round(2 + 14 * light, 2),
        "u_fric": np.round(0.1 + 0.5 * vented, 3)}, index=starts)
    _, report = _read(_write(tmp_path / "t.csv", records),
                      columns=MAPPING | {"nee": "co2_turb", "storage": "sc"})
    named = [w for w in report.warnings if "already holds the storage term" in w]
    if already_included:
        assert len(named) == 1 and "'co2_turb'" in named[0] and "'sc'" in named[0]
    else:
        assert named == []


def test_undeclared_missing_code_in_the_storage_column_is_named(tmp_path):
    """NEE is the turbulent flux plus storage: a code in the storage column makes the sum
    implausible, and the hint names the storage column (the turbulent values are fine)."""
    records = _records(periods=2000)
    records["co2_turb"] = records.pop("co2_flux")
    records["sc"] = 0.1
    records.iloc[100:130, records.columns.get_loc("sc")] = -7999
    # since round layouts55 the storage column's code is read as missing, named by its
    # column, and NEE is missing for those records (it was -7999 + the flux)
    frame, report = _read(_write(tmp_path / "t.csv", records), missing=(-9999,),
                          columns=MAPPING | {"nee": "co2_turb", "storage": "sc"})
    line = next(w for w in report.warnings if w.startswith("storage: the value -7999"))
    assert "alone occurs 30 times in column 'sc'" in line and "read as missing" in line
    assert frame["nee"].iloc[100:130].isna().all()
    assert frame["nee"].abs().max() < 100
    assert not any(w.startswith("nee: ") and "outside" in w for w in report.warnings)


def test_storage_column_without_values_is_named(tmp_path):
    """A storage column holding only missing codes leaves no record with NEE; the error names
    the storage column (it blamed the NEE column, which holds values)."""
    records = _records()
    records["co2_turb"] = records.pop("co2_flux")
    records["sc"] = -9999
    with pytest.raises(MissingColumnError, match=r'storage = "sc": the column has no values'):
        _read(_write(tmp_path / "t.csv", records),
              columns=MAPPING | {"nee": "co2_turb", "storage": "sc"})


@pytest.mark.parametrize(("empty", "mapping", "named"), [
    ("par", {"rg": None, "ppfd": "par"}, r"rg .*the ppfd column 'par' it is converted from"),
    ("rh", {"vpd": None, "rh": "rh"}, r"vpd .*derived from rh \('rh'\) and tair \('t_air'\)"),
    ("sw_down", {}, r"rg .*column 'sw_down' has no value")])
def test_required_variable_without_values_names_its_file_columns(tmp_path, empty, mapping,
                                                                  named):
    """Rg from an empty PPFD column, VPD from an empty RH column: the error names the file
    column (it named 'rg' or 'vpd', which the file does not have)."""
    records = _records()
    records["par"] = records["sw_down"] * 2.1
    records["rh"] = 50.0
    records[empty] = -9999
    columns = {k: v for k, v in (MAPPING | mapping).items() if v is not None}
    with pytest.raises(MissingColumnError, match=named):
        _read(_write(tmp_path / "t.csv", records), columns=columns)


def test_ppfd_converted_to_rg(tmp_path):
    """PPFD mapped without rg: rg = ppfd / 2.10 µmol J-1 (0.46 x 4.57, McCree 1972 (m))."""
    records = _records()
    twin = records.copy()
    records["par"] = records.pop("sw_down") * 2.1022
    mapping = {k: v for k, v in MAPPING.items() if k != "rg"} | {"ppfd": "par"}
    frame, report = _read(_write(tmp_path / "t.csv", records), columns=mapping)
    np.testing.assert_allclose(frame["rg"], _plain(tmp_path, twin)["rg"], rtol=1e-9)
    assert "rg" in report.derived and "ppfd" not in frame.columns


def test_undeclared_missing_code_in_ppfd_is_named(tmp_path):
    """An undeclared code in a PPFD column that rg is derived from is named as written.

    -7999 µmol m-2 s-1 is -3805 W m-2 of rg, far below any radiation; the warning names
    the file's value, -7999, which is what [input] missing must hold.
    """
    records = _records(periods=2000)
    records["par"] = records.pop("sw_down") * 2.1022
    records.iloc[10:30, records.columns.get_loc("par")] = -7999
    mapping = {k: v for k, v in MAPPING.items() if k != "rg"} | {"ppfd": "par"}
    frame, report = _read(_write(tmp_path / "t.csv", records), columns=mapping,
                          missing=(-9999,))
    # since round layouts55 read as missing, named as written in its column
    line = next(w for w in report.warnings if w.startswith("ppfd: the value -7999"))
    assert "alone occurs 20 times in column 'par'" in line
    assert frame["rg"].iloc[10:30].isna().all() and frame["rg"].min() > -50


@pytest.mark.parametrize("encoding", ["utf-16", "utf-16-le", "utf-8-sig", "latin-1"])
def test_encodings(tmp_path, encoding):
    """UTF-16 (with or without byte-order mark) and UTF-8 with BOM are detected; Latin-1
    needs [input] encoding and gets a one-line hint without it."""
    records = _records()
    records = records.rename(columns={"t_air": "t_air °C"})
    out = records.copy()
    out.insert(0, "stamp", records.index.strftime(FORMAT))
    out.to_csv(tmp_path / "t.csv", index=False, encoding=encoding)
    mapping = MAPPING | {"tair": "t_air °C"}
    if encoding == "latin-1":
        with pytest.raises(InputFileError, match=r"not utf-8 text \(byte 0xb0 on line 1\); set "
                                                 r"\[input\] encoding = \"latin-1\""):
            _read(tmp_path / "t.csv", columns=mapping)
        frame, report = _read(tmp_path / "t.csv", columns=mapping, encoding="latin-1")
    else:
        frame, report = _read(tmp_path / "t.csv", columns=mapping)
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, _records()))
    assert report.encodings[0].startswith(encoding.split("-sig")[0][:6])


def test_nonfinite_and_absurd_values_read_as_missing(tmp_path, recwarn):
    """inf, the largest float and 1e38 are missing with a count, never kept; no NumPy
    warning (issue 12)."""
    records = _records().astype(object)
    records.iloc[3, 3] = "1.8e308"
    records.iloc[4, 3] = "inf"
    records.iloc[5, 1] = "-1e38"
    frame, report = _read(_write(tmp_path / "t.csv", records))
    assert np.isnan(frame["vpd"].iloc[[3, 4]]).all() and np.isnan(frame["rg"].iloc[5])
    assert np.isfinite(frame.drop(columns=[]).to_numpy()[~np.isnan(frame.to_numpy())]).all()
    assert report.nonfinite_cells == {"nee": 0, "rg": 1, "tair": 0, "vpd": 2, "ustar": 0}
    assert "non-finite        rg: 1, vpd: 2" in str(report)
    assert not [w for w in recwarn if issubclass(w.category, RuntimeWarning)]


# ----------------------------------------------------------------------------- unit mix-ups (issue 12)


def _climate(kind, days=10, seed=5):
    """Invented records of one climate with its site: warm desert, polar summer and night,
    humid tropics, a crop with large uptake, a cool grassland (known truth for the checks).

    Rg follows the potential radiation of fluxpart.solar times a cloud factor; the flux
    noise is Laplace with scale 0.5 + 0.1 |NEE| µmol m-2 s-1, after the growth of random
    error with flux magnitude (Richardson et al. 2006, Agric. For. Meteorol. 136:1-18).
    """
    from fluxpart.solar import potential_radiation

    sites = {  # latitude, longitude, utc_offset, start, tair range [°C], rh range [%], uptake
        "desert": (33.0, -112.0, -7.0, "2021-07-01", (28, 46), (6, 25), -2.0),
        "polar_summer": (78.9, 11.9, 1.0, "2021-06-20", (0, 7), (70, 95), -4.0),
        "polar_night": (78.9, 11.9, 1.0, "2021-12-10", (-28, -15), (75, 95), 0.0),
        "humid_tropics": (-2.6, -60.2, -4.0, "2021-03-01", (23, 31), (72, 99), -25.0),
        "crop": (40.0, -88.0, -6.0, "2021-07-15", (20, 33), (45, 90), -60.0),
        "grassland": (-45.0, 170.0, 12.0, "2021-12-01", (8, 22), (50, 95), -18.0),
    }
    latitude, longitude, offset, start, (t_low, t_high), (h_low, h_high), uptake = sites[kind]
    rng = np.random.default_rng(seed)
    starts = pd.date_range(start, periods=48 * days, freq="30min")
    potential = potential_radiation(starts, latitude, longitude, offset, interval_minutes=30)
    clouds = np.repeat(rng.uniform(0.3, 0.8, days), 48)
    rg = potential * clouds + rng.normal(0, 2, len(starts))
    light = potential / max(potential.max(), 1.0)
    tair = t_low + (t_high - t_low) * light ** 0.7
    rh = h_high - (h_high - h_low) * light ** 0.7
    vpd = 6.1094 * np.exp(17.625 * tair / (tair + 243.04)) * (1 - rh / 100)
    respiration = 0.3 + 0.15 * np.exp(0.07 * tair) * (1 if uptake else 0.3)
    nee = respiration + uptake * (clouds / 0.8) * 2 * light / (1 + light)
    nee = nee + rng.laplace(0, 0.5 + 0.1 * np.abs(nee), len(starts)) / np.sqrt(2)
    records = pd.DataFrame({"co2_flux": np.round(nee, 3), "sw_down": np.round(rg, 1),
                            "t_air": np.round(tair, 2), "vpd_air": np.round(vpd, 3),
                            "u_fric": np.round(rng.uniform(0.05, 0.8, len(starts)), 3),
                            "rel_hum": np.round(rh, 1)}, index=starts)
    return records, Site(name=kind, latitude=latitude, longitude=longitude, utc_offset=offset)


CLIMATES = ["desert", "polar_summer", "polar_night", "humid_tropics", "crop", "grassland"]


@pytest.mark.parametrize("kind", CLIMATES)
def test_correct_files_of_every_climate_pass(tmp_path, kind):
    """Correct units at a desert (VPD to ~90 hPa), polar summer and night, humid tropics,
    a crop with ~-60 µmol m-2 s-1 uptake and a grassland: no refusal, no unit suspicion."""
    records, site = _climate(kind)
    frame, report = _read(_write(tmp_path / "t.csv", records), site=site,
                          columns=MAPPING | {"rh": "rel_hum"})
    assert len(frame) == len(records)
    suspicious = [w for w in report.warnings if "set [input.units]" in w]
    if kind == "polar_night":  # no sun, tiny fluxes, saturated air: may warn, never refuse
        assert all(w.startswith(("nee", "column 'vpd_air'")) for w in suspicious)
    else:
        assert not suspicious


@pytest.mark.parametrize("kind", ["grassland", "humid_tropics", "polar_summer", "crop"])
def test_nee_in_mg_refused(tmp_path, kind):
    """NEE in mg CO2 m-2 s-1 read as µmol (22.7 times too small: 44.01 g mol-1 CO2,
    IUPAC atomic weights) is refused with the unit to set; accept_units keeps it."""
    records, site = _climate(kind)
    records["co2_flux"] = (records["co2_flux"] / UNITS["flux"]["mg_co2_in_umol"]).round(5)
    path = _write(tmp_path / "t.csv", records)
    with pytest.raises(ImplausibleValueError,
                       match=r"column 'co2_flux' \(nee.*set \[input.units\] nee = "
                             r"\"mg CO2 m-2 s-1\""):
        _read(path, site=site)
    frame, _ = _read(path, site=site, units={"nee": "mg CO2 m-2 s-1"})
    original, _ = _read(_write(tmp_path / "o.csv", _climate(kind)[0]), site=site)
    np.testing.assert_allclose(frame["nee"], original["nee"], atol=2e-4 * 22.7)
    kept, report = _read(path, site=site, accept_units=["nee"])
    assert report.accepted_units == ("nee",) and any("accept_units" in w for w in report.warnings)
    np.testing.assert_allclose(kept["nee"].abs().max(), records["co2_flux"].abs().max())


@pytest.mark.parametrize("kind", ["desert", "grassland", "humid_tropics", "crop"])
def test_vpd_in_kpa_read_as_hpa_refused(tmp_path, kind):
    """VPD in kPa read as hPa (1 kPa = 10 hPa, SI prefixes) stays below a tenth of the
    saturation vapour pressure: refused, also at a desert where kPa values reach 9."""
    records, site = _climate(kind)
    records["vpd_air"] = (records["vpd_air"] / 10).round(4)
    with pytest.raises(ImplausibleValueError, match=r"'vpd_air'.*vpd = \"kPa\""):
        _read(_write(tmp_path / "t.csv", records), site=site)


def test_vpd_in_kpa_caught_against_rh(tmp_path):
    """With rh also mapped, VPD a tenth of es(1 - rh) is refused as kPa."""
    records, site = _climate("desert")
    records["vpd_air"] = (records["vpd_air"] / 10).round(4)
    with pytest.raises(ImplausibleValueError, match=r"median 0.1.* times the VPD computed from "
                                                    r"rh and tair.*vpd = \"kPa\""):
        _read(_write(tmp_path / "t.csv", records), site=site,
              columns=MAPPING | {"rh": "rel_hum"})


def test_vpd_above_saturation_refused(tmp_path):
    """VPD cannot exceed the saturation vapour pressure (the physical limit): hPa values
    declared as kPa are refused."""
    records, site = _climate("polar_summer")
    with pytest.raises(ImplausibleValueError, match=r"'vpd_air' \(vpd, read as 'kPa'\).*"
                                                    r"saturation vapour pressure"):
        _read(_write(tmp_path / "t.csv", records), site=site, units={"vpd": "kPa"})


@pytest.mark.parametrize(("kind", "unit", "factor"), [
    ("grassland", "kW m-2", 1e-3), ("crop", "kW m-2", 1e-3), ("desert", "MJ m-2", 1800e-6),
    ("humid_tropics", "MJ m-2", 1800e-6)])
def test_rg_in_kw_or_mj_refused(tmp_path, kind, unit, factor):
    """Rg in kW m-2 or MJ m-2 per half hour (1 W = 1 J s-1) is refused naming the unit; read
    with that unit it gives the W m-2 record back."""
    records, site = _climate(kind)
    original = _plain(tmp_path, records, site=site)
    records["sw_down"] = (records["sw_down"] * factor).round(6)
    path = _write(tmp_path / "t.csv", records)
    with pytest.raises(ImplausibleValueError, match=rf"'sw_down' \(rg.*rg = \"{unit}\""):
        _read(path, site=site)
    frame, _ = _read(path, site=site, units={"rg": unit})
    np.testing.assert_allclose(frame["rg"], original["rg"], atol=1.0)


def test_accept_units_setting_validated(tmp_path):
    """accept_units must list canonical variables."""
    records, site = _climate("grassland")
    with pytest.raises(ConfigError, match=r'\[input\] accept_units = \["nnee"\]'):
        _read(_write(tmp_path / "t.csv", records), site=site, accept_units=["nnee"])


def test_input_record_of_several_files(tmp_path):
    """The provenance of several files lists each with its SHA-256 (hashlib) and a joint hash."""
    records = _records(periods=200)
    _write(tmp_path / "tower_a.csv", records.iloc[:100], marks="end")
    _write(tmp_path / "tower_b.csv", records.iloc[100:], marks="end")
    site_config = read_site_config(_site_toml(tmp_path, csv="tower_*.csv"))
    record = site_config.input_record()
    assert [entry["sha256"] for entry in record["files"]] == [
        _sha256(tmp_path / "tower_a.csv"), _sha256(tmp_path / "tower_b.csv")]
    joint = "".join(f"tower_{x}.csv\t{_sha256(tmp_path / f'tower_{x}.csv')}\n" for x in "ab")
    assert record["sha256"] == hashlib.sha256(joint.encode()).hexdigest()
    _, report = site_config.read()
    assert report.to_dict()["files"] == 2  # how many; their paths are in the input record


def test_messy_logger_example_reads_to_the_demo_year(tmp_path):
    """examples/make_logger_example.py (every layout setting at once) reads back to the
    invented demo year it was written from, within the rounding of the files."""
    import importlib.util
    from pathlib import Path

    from fluxpart import demo

    script = Path(__file__).resolve().parent.parent / "examples" / "make_logger_example.py"
    spec = importlib.util.spec_from_file_location("make_logger_example", script)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    truth, _ = demo.site_year(3, variant="c4")
    frame, report = read_site_config(module.write_logger_example(tmp_path, 3, truth)).read()
    # rounding of the files: NEE and storage 0.001, rh 0.1 (vpd from it), ppfd 0.01
    for name, tolerance in {"nee": 1.1e-3, "rg": 0.01, "tair": 0.006, "ustar": 6e-4,
                            "tsoil": 0.006, "rh": 0.051, "vpd": 0.05}.items():
        np.testing.assert_allclose(frame[name], truth[name], atol=tolerance, err_msg=name)
    assert (frame["nee_flag"] >= (truth["nee_flag"] != 0)).all()
    assert report.duplicate_rows == 3 and report.merged_rows == 48
    assert report.stamp_conversions["hour_24"] == 365 + 1


def test_header_on_another_line_names_rows_before_header(tmp_path):
    """A title line above the header (or a wrong count) names the setting that fixes it."""
    path = _write(tmp_path / "t.csv", _records())
    path.write_text("station 4, program 2\n" + path.read_text())
    with pytest.raises(MissingColumnError, match=r"on line 2: set \[input\] rows_before_header "
                                                 r"= 1"):
        _read(path)
    frame, _ = _read(path, rows_before_header=1)
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, _records()))


def test_ppfd_mapped_as_rg_refused(tmp_path):
    """PPFD (about 2.1 µmol J-1 times Rg) mapped as rg exceeds the top-of-atmosphere
    radiation with the sun high, which global radiation cannot: refused, naming ppfd."""
    records, site = _climate("grassland")
    records["sw_down"] = (records["sw_down"] * 2.1).round(1)
    with pytest.raises(ImplausibleValueError, match=r"'sw_down' \(rg.*PPFD.*map the column as "
                                                    r"ppfd"):
        _read(_write(tmp_path / "t.csv", records), site=site)


def test_preflight_lists_unit_problems_instead_of_raising(tmp_path):
    """unit_problems="report" (fluxpart check) lists the refusal and keeps reading; the
    default (fluxpart run) raises the same message."""
    records, site = _climate("crop")
    records["vpd_air"] = (records["vpd_air"] / 10).round(4)
    path = _write(tmp_path / "t.csv", records)
    frame, report = _read(path, site=site, unit_problems="report")
    assert len(report.unit_refusals) == 1 and "vpd = \"kPa\"" in report.unit_refusals[0]
    assert report.warnings[-1].endswith("(run stops)")
    with pytest.raises(ImplausibleValueError, match=re.escape(report.unit_refusals[0])):
        _read(path, site=site)


def test_hour_24_in_compact_stamps(tmp_path):
    """Hour 24 in a compact %Y%m%d%H%M stamp (202106012400) is the next midnight too."""
    records = _records(periods=6, start="2021-06-01 22:00")
    path = _write(tmp_path / "t.csv", records, marks="end", time_format="%Y%m%d%H%M")
    path.write_text(path.read_text().replace("202106020000", "202106012400"))
    frame, report = _read(path, time_marks="end", time_format="%Y%m%d%H%M")
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    assert report.stamp_conversions["hour_24"] == 1


def test_flag_rejecting_most_records_warns(tmp_path):
    """A flag_accept that rejects most records (likely the wrong values) is reported."""
    records = _records()
    records["qc"] = np.arange(96) % 3
    _, report = _read(_write(tmp_path / "t.csv", records), columns=MAPPING | {"nee_flag": "qc"},
                      flag_accept=[2])
    assert any(w.startswith("nee_flag: 64 of 96 records with an NEE value (67 %)") and "flag_accept = [2]" in w
               for w in report.warnings)


def test_flag_rejecting_every_nee_record_is_an_error_naming_flag_accept(tmp_path):
    """Every measured NEE record rejected by the site flag (flags 1 and 2, flag_accept = [0]):
    the reader names the flag and flag_accept; run stopped at the partitioning stages,
    naming only missing night records. A flag missing where NEE is measured keeps that
    record (no judgement by the site), so the file is read."""
    records = _records()
    records["qc"] = 1 + np.arange(96) % 2
    path = _write(tmp_path / "t.csv", records)
    with pytest.raises(ImplausibleValueError, match=r"^nee_flag: every record with a value in "
                                                     r"'co2_flux' is rejected by qc with \[input\] "
                                                     r"flag_accept = \[0\]; the flags hold \['1', '2'\]"):
        _read(path, columns=MAPPING | {"nee_flag": "qc"})
    # (layouts33: a flag rejecting more than 95 % of the flagged records is refused as
    # process() refuses it, so the missing flag is shown beside flags that keep a third)
    records["qc"] = (np.arange(96) % 3).astype(float)
    records.iloc[5, records.columns.get_loc("qc")] = np.nan
    frame, _ = _read(_write(tmp_path / "u.csv", records), columns=MAPPING | {"nee_flag": "qc"})
    assert np.isnan(frame["nee_flag"].iloc[5])


def test_constant_nee_is_not_taken_for_a_unit_mixup(tmp_path):
    """A constant NEE column (a logger stuck at one value) says nothing about its unit:
    the reader raises no mg CO2 suspicion and leaves the finding to the preflight."""
    records, site = _climate("grassland")
    records["co2_flux"] = 0.01
    frame, report = _read(_write(tmp_path / "t.csv", records), site=site)
    assert (frame["nee"] == 0.01).all()
    assert not [w for w in report.warnings if w.startswith("nee")]


def test_unit_in_the_wrong_letter_case_suggests_the_right_one(tmp_path):
    """[input.units] vpd = "kpa" names "kPa" (fresh-eyes campaign: the list of units only);
    not accepted silently, since unit symbols are case-sensitive (SI brochure, 9th ed., 5.2:
    mPa and MPa differ by 1e9)."""
    path = _site_toml(tmp_path, extra="[input.units]\nvpd = \"kpa\"\n")
    with pytest.raises(UnitError, match=r'\[input.units\] vpd = "kpa" is not a known unit for '
                                        r'vpd; did you mean "kPa"\? \(unit symbols are case'):
        read_site_config(path)


def test_plain_number_columns_read_bit_for_bit_as_pandas_to_numeric():
    """Issue 17: a column of plain numbers takes the Arrow cast, which must give the same
    doubles as pandas.to_numeric (pandas version printed on failure; the reader's general
    path) for repr, %.6g, %.17g and %e formatting, with empty cells as missing; a text code
    or padding falls back to the general path with the same result."""
    from fluxpart import io as fio

    rng = np.random.default_rng(17)
    values = np.concatenate([rng.normal(0, 10, 3000), rng.lognormal(0, 8, 3000)])
    texts = ([repr(float(v)) for v in values[:2000]] + [f"{v:.6g}" for v in values[2000:4000]]
             + [f"{v:.17g}" for v in values[4000:5000]] + [f"{v:.3e}" for v in values[5000:]])
    cells = pd.Series(texts + ["", "-9999"], dtype="str")
    expected = pd.to_numeric(cells.where(cells != "", None), errors="coerce").to_numpy(
        dtype=float, na_value=np.nan).copy()
    expected[-1] = np.nan                                    # -9999 is a missing code
    lines = np.arange(len(cells)) + 2
    plain = fio._plain_numbers(cells, ".")
    assert plain is not None, f"pandas {pd.__version__}: fast path not taken"
    got, codes, absurd = fio._numbers(cells, "c", "nee", (-9999,), ".", "f.csv", lines)
    assert codes == 2 and not absurd.any()
    np.testing.assert_array_equal(got.view(np.int64)[:-2], expected.view(np.int64)[:-2])
    assert np.isnan(got[-2:]).all()
    padded = pd.Series([" 1.5", "NA", "2.25"], dtype="str")
    assert fio._plain_numbers(padded, ".") is None
    got, codes, _ = fio._numbers(padded, "c", "nee", ("NA",), ".", "f.csv", np.arange(3) + 2)
    np.testing.assert_array_equal(got, [1.5, np.nan, 2.25])
    assert codes == 1


def test_overlapping_files_whose_rows_complete_each_other_are_merged(tmp_path):
    """Two downloads of one logger overlap; in the first, the last rows of the overlap lack
    NEE (the file was copied while those records were written). Every cell equal where
    both have it, so each stamp is read once with the cell from the file that has it: the
    frame equals the single file's (known-truth recovery of the reader)."""
    records = _records(periods=200)
    early = records.iloc[:120].copy()
    early.loc[early.index[110:], "co2_flux"] = np.nan   # NEE missing in the first file's last rows
    first = _write(tmp_path / "a.csv", early)
    second = _write(tmp_path / "b.csv", records.iloc[100:])
    frame, report = _read([first, second])
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    assert report.merged_rows == 20
    assert any("10 stamp(s) came from overlapping files" in w for w in report.warnings)
    # a value both files give and that differs is still refused
    clash = records.iloc[:120].copy()
    clash.loc[clash.index[115], "co2_flux"] += 1.0
    _write(tmp_path / "a.csv", clash)
    with pytest.raises(DuplicateTimestampError, match="overlapping files disagree"):
        _read([first, second])


def test_completed_overlap_of_three_files_counts_stamps_and_names_the_first(tmp_path):
    """Three downloads overlap on the same 10 stamps, each lacking another column there
    (NEE, Rg, air temperature). Each stamp is read once with every cell (the single
    file's frame); the warning counted the 20 rows merged away as "20 stamp(s) came from
    two overlapping files" and named no file: it now counts the 10 stamps and names the
    first one's three lines (review round nine)."""
    records = _records(periods=200)
    parts = [records.iloc[:130].copy(), records.iloc[90:150].copy(), records.iloc[100:].copy()]
    for part, column in zip(parts, ("co2_flux", "sw_down", "t_air"), strict=True):
        part.loc[records.index[110:120], column] = np.nan
    paths = [_write(tmp_path / f"{name}.csv", part) for name, part in zip("abc", parts, strict=True)]
    frame, report = _read(paths[::-1])
    pd.testing.assert_frame_equal(frame, _plain(tmp_path, records))
    assert report.merged_rows == 290 - 200                  # rows beyond one per stamp
    completed = [w for w in report.warnings if "complete each other" in w]
    assert len(completed) == 1
    assert completed[0].startswith("10 stamp(s) came from overlapping files")
    assert (f"the first {records.index[110]} on line 12 of {str(paths[2])!r} and line 22 "
            f"of {str(paths[1])!r} and line 112 of {str(paths[0])!r}") in completed[0]


def test_a_zone_without_summer_time_in_the_record_says_nothing_moved():
    """time_zone = "UTC" at a site of offset 0 (or a winter-only record) moves no stamp; the
    reader summary said "civil time of UTC: 0 daylight-saving stamp(s) moved back one hour"
    (review round nine)."""
    from fluxpart.io import _conversion_text

    text = _conversion_text({"time_zone": "UTC", "daylight_saving": 0})
    assert text == "civil time of UTC: no daylight-saving stamp, nothing moved"
    assert "3 daylight-saving stamp(s) moved back one hour" in _conversion_text(
        {"time_zone": "Europe/Berlin", "daylight_saving": 3})


def test_mapped_name_in_another_case_is_suggested(tmp_path):
    """A column written in capitals ('CO2_FLUX') for the mapped 'co2_flux' is named in the
    refusal: difflib's similarity ratio of the two is 0.25 (Python's ``difflib``), below
    any useful cutoff, so only a comparison without case finds it (review round twelve)."""
    import difflib

    assert difflib.SequenceMatcher(None, "co2_flux", "CO2_FLUX").ratio() < 0.6
    path = _write(tmp_path / "t.csv", _records().rename(columns={"co2_flux": "CO2_FLUX"}))
    with pytest.raises(MissingColumnError, match=r"nee = \"co2_flux\": no such column in "
                       r".*\(did you mean 'CO2_FLUX'\?\)"):
        _read(path)


def test_units_line_that_differs_between_files_is_warned(tmp_path):
    """Two files whose units lines name VPD in hPa and in kPa (a logger program changed
    during the record) are read with one [input.units]; the value checks see the tenfold
    change only in months that give it away, so the reader names the units lines that
    differ, with both files (review round twelve: a kPa half-year without rh passed with
    a warning for four of its six months). Outside fact: 1 kPa = 10 hPa (SI prefixes)."""
    first, second = _records(), _records(start="2021-06-03 00:00")
    units = "yyyy-mm-dd HH:MM,umol m-2 s-1,W m-2,degC,{vpd},m s-1,%,degC"
    for name, records, vpd, factor in (("a.csv", first, "hPa", 1.0),
                                       ("b.csv", second, "kPa", 0.1)):
        written = records.assign(vpd_air=records["vpd_air"] * factor)
        lines = _write(tmp_path / name, written).read_text().splitlines()
        lines.insert(1, units.format(vpd=vpd))
        (tmp_path / name).write_text("\n".join(lines) + "\n")
    _, report = _read([tmp_path / "a.csv", tmp_path / "b.csv"], rows_after_header=1)
    noted = [w for w in report.warnings if "lines under the header" in w]
    assert len(noted) == 1
    assert "'vpd_air' (vpd) has 'hPa' in" in noted[0] and "a.csv" in noted[0]
    assert "but 'kPa' in" in noted[0] and "b.csv" in noted[0]
    assert "co2_flux" not in noted[0]          # columns whose lines agree are not named
    lines = (tmp_path / "b.csv").read_text().splitlines()
    lines[1] = units.format(vpd="hPa")
    (tmp_path / "b.csv").write_text("\n".join(lines) + "\n")
    _, report = _read([tmp_path / "a.csv", tmp_path / "b.csv"], rows_after_header=1)
    assert not [w for w in report.warnings if "lines under the header" in w]


def test_a_path_written_from_another_folder_is_named(tmp_path, monkeypatch):
    """``[input] path`` is read relative to the site config's folder; one written relative
    to the folder the command runs in (or the project's top folder) is named with the
    file it names there (round mistakes41), and an absent file keeps its own message."""
    (tmp_path / "data").mkdir()
    (tmp_path / "site").mkdir()
    _write(tmp_path / "data" / "tower.csv", _records(), marks="end")
    config = _site_toml(tmp_path / "site", csv="data/tower.csv")
    monkeypatch.chdir(tmp_path)
    with pytest.raises(ConfigError, match=r"\[input\] path = \"data/tower.csv\": no such file in "
                                          r"the site config's folder .*relative to the site "
                                          r"config's own folder"):
        read_site_config(config)
    config.write_text(config.read_text(encoding="utf-8").replace("data/tower.csv", "none.csv"),
                      encoding="utf-8")
    with pytest.raises(InputFileError, match="does not exist"):
        read_site_config(config).read()
