"""Logger layouts of the layouts18 round: stamps labelled with European zone
abbreviations (CET in winter, CEST in summer), units written with a full stop for the
product's dot, and a tab delimiter written as a word or a TOML literal string.

Outside facts, each named beside its check: the IANA time-zone database as shipped with
Python's ``zoneinfo`` (Europe/Berlin: CET = UTC+1, CEST = UTC+2, summer time from
2021-03-28 02:00 CET to 2021-10-31 03:00 CEST); the abbreviations CEST, EEST and WEST
name the summer times one hour ahead of CET, EET and WET (IANA "europe" file (m)).
"""

import re

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import ConfigError, DuplicateTimestampError, InputFileError, TimestampError
from fluxpart.io import read_site_config, read_table
from fluxpart.timestamps import parse_stamps
from fluxpart.variables import unit_spelling


def _parse(text, time_format, utc_offset=1.0, **kwargs):
    series = pd.Series(text, dtype=object)
    return parse_stamps(series, time_format, time_columns=("stamp",), source="t.dat",
                        lines=np.arange(2, len(text) + 2), utc_offset=utc_offset,
                        **kwargs).stamps


def _labelled(zone, truth_standard, standard_offset):
    """Civil-time stamps of `zone` with their abbreviation, for standard-time `truth`."""
    utc = (truth_standard - pd.Timedelta(hours=standard_offset)).tz_localize("UTC")
    return list(utc.tz_convert(zone).strftime("%Y-%m-%d %H:%M %Z"))


@pytest.mark.parametrize("zone, offset", [("Europe/Berlin", 1.0), ("Europe/Helsinki", 2.0),
                                          ("Europe/Lisbon", 0.0)])
def test_stamps_labelled_with_winter_and_summer_abbreviations_are_read(zone, offset):
    """A civil-time logger that writes the zone label beside each stamp ("... 02:30 CEST"
    then "... 02:30 CET" in the repeated autumn hour): each label names one offset, so
    the stamps are read as local standard time without a time_zone, both autumn hours
    kept apart. Before, CEST was refused ("not read") and the first summer stamp of a
    day-first check stopped the reader with a traceback of pandas' mixed offsets."""
    truth = pd.date_range("2021-03-27 00:00", "2021-11-01 00:00", freq="30min")
    text = _labelled(zone, truth, offset)
    assert any(t.endswith("ST") for t in text)          # summer labels present
    clock = pd.Series([t.rsplit(" ", 1)[0] for t in text])
    assert clock.duplicated().sum() == 2                 # the repeated autumn hour
    assert len(set(text)) == len(text)                   # ... told apart by its labels
    stamps = _parse(text, "%Y-%m-%d %H:%M %Z", utc_offset=offset)
    assert list(stamps) == list(truth)


def test_labels_of_several_zones_are_still_refused_with_the_list():
    """BST is British Summer Time and Bangladesh Standard Time: not read, named."""
    text = ["2021-07-01 00:30 BST", "2021-07-01 01:00 BST"]
    with pytest.raises(TimestampError, match=r"'BST' is not read .*CEST, MEST, EEST, WEST"):
        _parse(text, "%Y-%m-%d %H:%M %Z", utc_offset=0.0)


def test_a_damaged_stamp_among_cet_labels_is_named_not_a_traceback():
    """A damaged stamp (30 February: no such day in the Gregorian calendar) among stamps
    labelled CET over several months: the day/month exchange hint parsed the other
    stamps with %d and %m exchanged, where pandas reads "CET" as a zone with summer time
    and refused to mix the offsets (ValueError, a traceback). Now the stamp is named."""
    truth = pd.date_range("2021-01-01 00:30", "2021-06-30 00:00", freq="6h")
    text = list(truth.strftime("%Y-%m-%d %H:%M CET"))
    text[100] = "2021-02-30 00:30 CET"
    with pytest.raises(TimestampError, match=re.escape("line 102 of 't.dat' has stamp "
                                                       "'2021-02-30 00:30 CET'")):
        _parse(text, "%Y-%m-%d %H:%M %Z")


@pytest.mark.parametrize("name, written, accepted", [
    ("nee", "µmol.m-2.s-1", "µmol m-2 s-1"),
    ("nee", "umol.m-2.s-1", "umol m-2 s-1"),
    ("rg", "W.m-2", "W m-2"),
    ("rg", "W.m^-2", "W m-2"),
    ("ustar", "m.s-1", "m s-1"),
    ("nee", "mg CO2.m-2.s-1", "mg CO2 m-2 s-1"),
])
def test_a_full_stop_for_the_product_dot_is_the_same_unit(name, written, accepted):
    """"W.m-2" writes the product of W and m-2 with a full stop for the half-high dot,
    as typewriters and logger units lines do; the SI brochure writes a product with a
    space or a half-high dot (BIPM 2019, section 5.4.6 (m)). It was refused with the
    list of accepted spellings."""
    assert unit_spelling(name, written) == accepted


def test_a_decimal_number_in_a_unit_is_not_a_product():
    """A period between digits stays a decimal point (no unit here has one: it stays
    unknown, refused with the list, rather than read as another unit)."""
    assert unit_spelling("rg", "0.5 W m-2") == "0.5 W m-2"


@pytest.mark.parametrize("value", ["\\t", "tab", "TAB"])
def test_a_tab_written_as_a_word_or_a_literal_backslash_t_names_the_toml_fix(tmp_path, value):
    """In TOML a single-quoted '\\t' is a literal string: a backslash and a t (TOML 1.0,
    "Literal strings" (m)). The message said "expected a single character such as
    "\\t"", which looks like what was written; now it names the double quotes."""
    config = tmp_path / "site.toml"
    config.write_text(
        '[site]\nname = "x"\nlatitude = 49.3\nlongitude = 10.2\nutc_offset = 1.0\n'
        f'[input]\npath = "a.tsv"\ntime_column = "t"\ntime_format = "%Y%m%d%H%M"\n'
        f'time_marks = "end"\ndelimiter = \'{value}\'\n'
        '[input.columns]\nnee = "a"\nrg = "b"\ntair = "c"\nvpd = "d"\nustar = "e"\n',
        encoding="utf-8")
    (tmp_path / "a.tsv").write_text("t\ta\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=re.escape(
            'not the tab: write delimiter = "\\t" in double quotes')):
        read_site_config(config)


@pytest.mark.parametrize("time_format, text", [
    ("%Y-%m-%d %H:%M %z", ["2021-06-01 13:30 +02", "2021-06-01 09:00 -05"]),
    ("%Y-%m-%d %H:%M%z", ["2021-06-01 13:30+02", "2021-06-01 09:00-05"]),
    ("%Y-%m-%d %H:%M:%S%z", ["2021-06-01 13:30:00+02", "2021-06-01 09:00:00-05"]),
])
def test_utc_offsets_of_hours_alone_are_read(time_format, text):
    """An offset of hours alone (``+02``) is ISO 8601's ``±hh`` (ISO 8601:2004,
    4.2.5.1 (m)), as database exports write it. 13:30+02 is 11:30 UTC and 09:00-05 is
    14:00 UTC (the offset's definition: local = UTC + offset), so 12:30 and 15:00 at a
    site of UTC+1. After minutes or a space they had been refused ("does not match")."""
    stamps = _parse(text, time_format, utc_offset=1.0)
    assert list(stamps) == [pd.Timestamp("2021-06-01 12:30"), pd.Timestamp("2021-06-01 15:00")]


def _tower(periods=48 * 20, seed=4):
    """Invented half-hourly tower records (known truth for the reader)."""
    starts = pd.date_range("2021-06-01 00:00", periods=periods, freq="30min")
    rng = np.random.default_rng(seed)
    hour = starts.hour + starts.minute / 60
    day = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    return starts, pd.DataFrame({
        "stamp": (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M"),
        "co2_flux": np.round(3 - 15 * day + rng.normal(0, 1.5, periods), 3),
        "us": np.round(rng.uniform(0.05, 0.8, periods), 3),
        "sw": np.round(800 * day, 1),
        "t_air": np.round(14 + 8 * day, 2),
        "vpd": np.round(2 + 14 * day, 2),
    })


def _read_pair(tmp_path, flux, met):
    flux.to_csv(tmp_path / "flux.csv", index=False)
    met.to_csv(tmp_path / "met.csv", index=False)
    return read_table([tmp_path / "flux.csv", tmp_path / "met.csv"],
                      columns={"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air",
                               "vpd": "vpd"},
                      time_column="stamp", time_format="%Y-%m-%d %H:%M", time_marks="end")


def test_two_loggers_sharing_a_column_that_disagrees_name_only_that_column(tmp_path):
    """A flux logger's file and a meteorological logger's file of one period are joined
    by stamp; both log an air temperature, 0.3 K apart (two sensors). The refusal listed
    every variable as "different values" (those only one file gives included) and told
    to remove a copy of the overlap, which would remove NEE or the drivers. Now it names
    the column that disagrees and the fix; a plain overlap keeps its own fix."""
    starts, records = _tower()
    flux = records[["stamp", "co2_flux", "us", "t_air"]].copy()
    flux["t_air"] = np.round(flux["t_air"] + 0.3, 2)
    met = records[["stamp", "sw", "t_air", "vpd"]]
    with pytest.raises(DuplicateTimestampError, match=re.escape(
            "with different values (tair); 960 such stamp(s) in all: the files complete each "
            "other in nee, ustar, rg, vpd")) as caught:
        _read_pair(tmp_path, flux, met)
    assert "keep the column(s) of tair in one of them only" in str(caught.value)
    # the same sensor in both files: joined, every value as written
    frame, _ = _read_pair(tmp_path, records[["stamp", "co2_flux", "us", "t_air"]], met)
    assert np.array_equal(frame["tair"].to_numpy(), records["t_air"].to_numpy())
    assert np.array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())
    # two copies of one file, one value edited: the plain overlap fix, the column named
    edited = records.copy()
    edited.loc[5, "co2_flux"] += 1.0
    with pytest.raises(DuplicateTimestampError, match=re.escape(
            "with different values (nee); 1 such stamp(s) in all: remove one copy of the "
            "overlap from a file")):
        _read_pair(tmp_path, records, edited)


@pytest.mark.parametrize("second_units, warned", [
    ("{stamp},umol/m^2/s,W/m^2,Deg C,hPa,m/s", False),   # another notation of each unit
    ("{stamp},µmol m-2 s-1,W m-2,\u00c2\u00b0C,hPa,m s-1", False),  # UTF-8 '°C' as latin-1
    ("{stamp},µmol m-2 s-1,W m-2,°C,kPa,m s-1", True),     # VPD's unit changed: warned
])
def test_units_lines_in_another_spelling_or_encoding_are_no_unit_change(
        tmp_path, second_units, warned):
    """Two half-year files whose units lines write one unit in two notations or two
    encodings (a logger program's update wrote UTF-8 where the first file is latin-1, so
    with encoding = "latin-1" its '°C' reads 'Â°C': UTF-8 encodes U+00B0 as the bytes
    C2 B0 (RFC 3629 (m))) were warned as "a unit changed during the record", a false
    alarm beside the real one (hPa to kPa, 1 kPa = 10 hPa by the SI prefixes)."""
    _, records = _tower(periods=48 * 30)
    header = "stamp,co2_flux,sw,t_air,vpd,us"
    first_units = "{stamp},µmol m-2 s-1,W m-2,°C,hPa,m s-1"
    halves = (records.iloc[:720], records.iloc[720:])
    for name, half, units, encoding in (("a.csv", halves[0], first_units, "latin-1"),
                                        ("b.csv", halves[1], second_units, "utf-8")):
        rows = half[["stamp", "co2_flux", "sw", "t_air", "vpd", "us"]].astype(str).agg(
            ",".join, axis=1)
        text = "\n".join([header, units.format(stamp="yyyy-mm-dd HH:MM"), *rows]) + "\n"
        if "\u00c2" in text:                       # the UTF-8 bytes of '°', as written
            text = text.replace("\u00c2\u00b0", "°")
        (tmp_path / name).write_bytes(text.encode(encoding))
    frame, report = read_table([tmp_path / "a.csv", tmp_path / "b.csv"],
                               columns={"nee": "co2_flux", "rg": "sw", "tair": "t_air",
                                        "vpd": "vpd", "ustar": "us"},
                               time_column="stamp", time_format="%Y-%m-%d %H:%M",
                               time_marks="end", encoding="latin-1", rows_after_header=1)
    noted = [w for w in report.warnings if "lines under the header" in w]
    assert len(noted) == (1 if warned else 0)
    if warned:
        assert "'vpd' (vpd) has 'hPa' in" in noted[0] and "but 'kPa' in" in noted[0]
    assert np.array_equal(frame["tair"].to_numpy(), records["t_air"].to_numpy())


@pytest.mark.parametrize("folder, files, path", [
    ("Site [A]", ["q_01.csv", "q_02.csv"], "q_*.csv"),        # the config's folder
    ("site", ["Tower [old]/q_01.csv", "Tower [old]/q_02.csv"], "Tower [old]/q_*.csv"),
    ("site", ["tower[1].csv"], "tower[1].csv"),              # one file, named literally
])
def test_brackets_in_folder_and_file_names_are_read_as_written(tmp_path, folder, files, path):
    """Brackets are a character class to glob (Python's glob/fnmatch documentation:
    "[seq] matches any character in seq"), so a config in "Site [A]/", a folder
    "Tower [old]" or a file "tower[1].csv" (names a file manager gives copies) had
    "matched no file" although the files are there. Read as written now, each file once,
    its records as written (known-truth recovery)."""
    site = tmp_path / folder
    _, records = _tower(periods=48 * 4)
    parts = np.array_split(np.arange(len(records)), len(files))
    for name, rows in zip(files, parts, strict=True):
        (site / name).parent.mkdir(parents=True, exist_ok=True)
        records.iloc[rows][["stamp", "co2_flux", "us", "sw", "t_air", "vpd"]].to_csv(site / name,
                                                                            index=False)
    (site / "site.toml").write_text(
        '[site]\nname = "x"\nlatitude = 49.3\nlongitude = 10.2\nutc_offset = 1.0\n'
        f'[input]\npath = "{path}"\ntime_column = "stamp"\n'
        'time_format = "%Y-%m-%d %H:%M"\ntime_marks = "end"\n'
        '[input.columns]\nnee = "co2_flux"\nrg = "sw"\ntair = "t_air"\nvpd = "vpd"\nustar = "us"\n',
        encoding="utf-8")
    config = read_site_config(site / "site.toml")
    assert sorted(config.input_paths) == sorted(site / name for name in files)
    frame, _ = config.read()
    assert np.array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())


@pytest.mark.parametrize("later, proposed", [
    ("%Y-%m-%d %H:%M:%S", '"%Y-%m-%d %H:%M:%S"'),    # seconds added by a program update
    ("%y-%m-%d %H:%M", '"%y-%m-%d %H:%M"'),          # a two-digit year from an export
])
def test_stamps_that_change_their_form_midfile_are_named_as_two_forms(later, proposed):
    """Stamps written in one form up to a line and in another after it: the hint for the
    first failing stamp proposed the format of the second form, which fails every stamp
    of the first (strptime reads a field only as its format writes it: Python
    documentation of ``datetime.strptime``); following it, the user was refused again
    at line 2. Now both forms are named."""
    truth = pd.date_range("2021-01-01 00:30", periods=400, freq="30min")
    text = list(truth[:300].strftime("%Y-%m-%d %H:%M")) + list(truth[300:].strftime(later))
    with pytest.raises(TimestampError, match=re.escape(
            "the file writes its stamps in two forms ('2021-01-01 00:30' on line 2, "
            f"'{truth[300].strftime(later)}' from line 302), and time_format = {proposed} "
            "would read only the second")):
        _parse(text, "%Y-%m-%d %H:%M")
    # every stamp in the second form: the proposed format, as before; seconds that are
    # all zero are read as the minute they name since layouts40 (ISO 8601-1 (m))
    if later.endswith("%S"):
        assert list(_parse(list(truth.strftime(later)), "%Y-%m-%d %H:%M")) == list(truth)
        return
    with pytest.raises(TimestampError, match=re.escape(f"time_format = {proposed}")):
        _parse(list(truth.strftime(later)), "%Y-%m-%d %H:%M")


@pytest.mark.parametrize("kind", ["gzip", "bzip2", "xz"])
def test_a_compressed_table_is_read_as_the_table_it_holds(tmp_path, kind):
    """gzip, bzip2 and xz files hold one file each (the standard library's ``gzip``,
    ``bz2`` and ``lzma`` modules write them; gzip: RFC 1952 (m)); a logger folder or an
    archived year keeps tables so. They were refused ("decompress it"); read now, by
    their leading bytes, as the text they hold (known-truth recovery: every value as
    written). A truncated copy and a tar archive inside are named."""
    import bz2
    import gzip
    import lzma
    import tarfile

    _, records = _tower(periods=48 * 4)
    text = records[["stamp", "co2_flux", "us", "sw", "t_air", "vpd"]].to_csv(index=False).encode()
    packer = {"gzip": gzip.compress, "bzip2": bz2.compress, "xz": lzma.compress}[kind]
    options = {"columns": {"nee": "co2_flux", "rg": "sw", "tair": "t_air", "vpd": "vpd",
                           "ustar": "us"},
               "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M", "time_marks": "end"}
    (tmp_path / "tower.csv.packed").write_bytes(packer(text))
    frame, _ = read_table(tmp_path / "tower.csv.packed", **options)
    assert np.array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())
    (tmp_path / "cut.csv.packed").write_bytes(packer(text)[:-40])
    with pytest.raises(InputFileError, match=rf"cut.csv.packed' is {kind}-compressed but "
                       "cannot be decompressed"):
        read_table(tmp_path / "cut.csv.packed", **options)
    archive = tmp_path / "year.tar"
    with tarfile.open(archive, "w") as tar:
        tar.add(tmp_path / "tower.csv.packed", arcname="tower.csv")
    (tmp_path / "year.tar.packed").write_bytes(packer(archive.read_bytes()))
    # a tar of one table is the table (layouts43), as a zip of one is
    frame, _ = read_table(tmp_path / "year.tar.packed", **options)
    assert np.array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())
    with tarfile.open(archive, "w") as tar:
        tar.add(tmp_path / "tower.csv.packed", arcname="tower.csv")
        tar.add(tmp_path / "tower.csv.packed", arcname="tower_copy.csv")
    (tmp_path / "two.tar.packed").write_bytes(packer(archive.read_bytes()))
    with pytest.raises(InputFileError, match=rf"is a {kind}-compressed tar archive holding 2 "
                       r"file\(s\) \('tower.csv', 'tower_copy.csv'\)"):
        read_table(tmp_path / "two.tar.packed", **options)


def test_am_and_pm_written_with_full_stops_are_read():
    """"12:30 a.m." is 00:30 and "1:00 p.m." is 13:00 (the 12-hour clock: 12 a.m. is
    midnight, Python documentation of ``%I``/``%p`` (m)); style guides and some locales'
    exports write the full stops, which %p (the letters AM/PM) did not read: refused
    with no hint before."""
    text = ["01/02/2021 12:30 a.m.", "01/02/2021 1:00 p.m.", "01/02/2021 11:30 P.M.",
            "01/02/2021 9:30 AM"]
    stamps = _parse(text, "%m/%d/%Y %I:%M %p")
    assert list(stamps) == [pd.Timestamp("2021-01-02 00:30"), pd.Timestamp("2021-01-02 13:00"),
                            pd.Timestamp("2021-01-02 23:30"), pd.Timestamp("2021-01-02 09:30")]


@pytest.mark.parametrize("encoding", ["utf-32", "utf-32-be"])
def test_a_utf32_file_with_its_mark_is_read(tmp_path, encoding):
    """The UTF-32 LE byte-order mark FF FE 00 00 begins with UTF-16 LE's FF FE (Unicode
    standard, byte-order marks (m); Python's ``codecs.BOM_UTF32_LE``): such a file was
    read as UTF-16 and refused with the fix encoding = "utf-16", which cannot read it.
    Now read by its mark (known-truth recovery: every value as written)."""
    _, records = _tower(periods=48 * 4)
    text = records[["stamp", "co2_flux", "us", "sw", "t_air", "vpd"]].to_csv(index=False)
    data = text.encode("utf-32") if encoding == "utf-32" else (
        b"\x00\x00\xfe\xff" + text.encode("utf-32-be"))
    (tmp_path / "t.csv").write_bytes(data)
    frame, _ = read_table(tmp_path / "t.csv",
                          columns={"nee": "co2_flux", "rg": "sw", "tair": "t_air", "vpd": "vpd",
                                   "ustar": "us"},
                          time_column="stamp", time_format="%Y-%m-%d %H:%M", time_marks="end")
    assert np.array_equal(frame["nee"].to_numpy(), records["co2_flux"].to_numpy())


def test_a_short_month_first_record_read_day_first_is_named():
    """The first eleven days of June written month-first (06/01/2021 ... 06/12/2021
    00:00) all parse under a day-first format, as the 6th of January to November (a
    date's day is at most 12 in every one: Gregorian calendar); the record became
    eleven days spread over eleven months, 97 % of its stamps inserted as missing, with
    only a warning to check interval_minutes. Now the exchanged format is named. A true
    day-first record of the same days (01/06 ... 12/06) still reads."""
    truth = pd.date_range("2021-06-01 00:30", "2021-06-12 00:00", freq="30min")
    with pytest.raises(TimestampError, match=re.escape(
            "parse both day-first and month-first: read as time_format = "
            '"%d/%m/%Y %H:%M" they spread over 333 days, read with the day and the month '
            'exchanged they are 11.0 days of records: write time_format = "%m/%d/%Y %H:%M"')):
        _parse(list(truth.strftime("%m/%d/%Y %H:%M")), "%d/%m/%Y %H:%M")
    assert list(_parse(list(truth.strftime("%d/%m/%Y %H:%M")), "%d/%m/%Y %H:%M")) == list(truth)
    assert list(_parse(list(truth.strftime("%m/%d/%Y %H:%M")), "%m/%d/%Y %H:%M")) == list(truth)
