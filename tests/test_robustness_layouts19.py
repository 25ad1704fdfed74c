"""Logger layouts of the layouts19 round: a file that ends in zero bytes (a logger's
preallocated file, or a power cut that left the file's length without its data), column
names as near as each other (soil temperatures at several depths), a cp1252 header read as
latin-1, and paths written in Windows form on another system.

Outside facts, each named beside its check: Python's ``codecs`` (a general-purpose library):
byte 0x96 is U+2013 EN DASH in cp1252 and the C1 control character U+0096 in latin-1
(ISO 8859-1 leaves 0x80-0x9F to control codes (m)); ``difflib.SequenceMatcher`` scores
"t_soil" against "t_soil_1", "t_soil_2" and "t_soil_3" alike (each 6 of 14 characters
matched: 2 x 6 / 14);
FAT file systems write a file's length in its directory entry apart from its data
clusters, so a power cut can leave a length whose last clusters hold zeros (common
practice); a backslash is a character of a POSIX file name, not a separator (POSIX.1-2017,
section 3.170 "Filename" (m)), and a drive letter ``C:`` names no folder there.
"""

import codecs
import difflib
import os
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower as _tower_records

from fluxpart.batch import read_sites_file
from fluxpart.errors import ConfigError, ImplausibleValueError, InputFileError, MissingColumnError
from fluxpart.io import read_site_config, read_table

MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}


def _tower(periods=48 * 10, seed=5):
    """Invented half-hourly tower records (known truth for the reader): round
    layouts18's, ten days."""
    return _tower_records(periods, seed)


def _read(paths, columns=MAPPING, **kwargs):
    return read_table(paths, columns=columns, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", **kwargs)


@pytest.mark.parametrize("zeros", [8192, None])
def test_a_file_ending_in_zero_bytes_is_read_up_to_them(tmp_path, zeros):
    """A logger file whose end holds zero bytes (NUL): the logger preallocated it, or the
    power failed after the file's length was written and before its data (common
    practice, FAT). Every line before them is whole. Refused before ("delete them ... in a
    copy of the file"); a tail four times the text, as a preallocated file holds, was
    refused as UTF-16 text ("every other byte is zero"), whose fix cannot read it. Now
    read up to the zeros, as the same file without them, with one warning naming them."""
    starts, records = _tower()
    text = records.to_csv(index=False).encode()
    zeros = zeros or 4 * len(text)
    (tmp_path / "clean.csv").write_bytes(text)
    (tmp_path / "tail.csv").write_bytes(text + b"\x00" * zeros)
    clean, clean_report = _read(tmp_path / "clean.csv")
    frame, report = _read(tmp_path / "tail.csv")
    pd.testing.assert_frame_equal(frame, clean)
    assert list(frame.index) == list(starts)                  # known truth: the stamps
    np.testing.assert_array_equal(frame["nee"], records["co2_flux"])
    assert clean_report.warnings == ()
    assert len(report.warnings) == 1
    assert f"ends in {zeros} zero bytes (NUL) from line {len(records) + 2}" in report.warnings[0]


def test_zero_bytes_that_cut_a_line_drop_that_record_only(tmp_path):
    """Zeros that begin inside a line cut that record (its last value may be cut
    mid-number): it is dropped and named, the records before it are read."""
    starts, records = _tower()
    text = records.to_csv(index=False)
    cut = text[:-8]                                   # inside the last line's last value
    (tmp_path / "cut.csv").write_bytes(cut.encode() + b"\x00" * 4096)
    frame, report = _read(tmp_path / "cut.csv")
    assert list(frame.index) == list(starts[:-1])
    np.testing.assert_array_equal(frame["tair"], records["t_air"].iloc[:-1])
    assert len(report.warnings) == 1
    assert f"which cut line {len(records) + 1}" in report.warnings[0]
    assert "that record was dropped" in report.warnings[0]


def test_zero_bytes_inside_the_file_are_still_refused(tmp_path):
    """A block of zeros with records after it (a damaged card) is not a tail: refused,
    naming its line, as before."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines(keepends=True)
    lines[100] = "\x00" * len(lines[100])
    (tmp_path / "mid.csv").write_text("".join(lines))
    with pytest.raises(InputFileError, match="line 101 holds zero bytes"):
        _read(tmp_path / "mid.csv")


def test_a_month_file_of_zero_bytes_only_is_skipped_among_files(tmp_path):
    """A month file created as the power failed holds only zeros: one of several files
    (a list or a glob), it is skipped with a warning like an empty file (refused before as UTF-16 text); as
    the only file, it is refused as a file without records, not as UTF-16."""
    starts, records = _tower()
    records.iloc[:240].to_csv(tmp_path / "q_01.csv", index=False)
    records.iloc[240:].to_csv(tmp_path / "q_02.csv", index=False)
    (tmp_path / "q_03.csv").write_bytes(b"\x00" * 4096)
    frame, report = _read([tmp_path / f"q_0{month}.csv" for month in (1, 2, 3)])
    assert list(frame.index) == list(starts)
    np.testing.assert_array_equal(frame["nee"], records["co2_flux"])
    assert len(report.warnings) == 1
    assert "q_03.csv' holds only zero bytes: skipped" in report.warnings[0]
    with pytest.raises(InputFileError, match=r"holds only zero bytes \(NUL; 4096\)"):
        _read(tmp_path / "q_03.csv")


def test_columns_as_near_as_each_other_are_all_named(tmp_path):
    """Soil temperatures at three depths (t_soil_1, t_soil_2, t_soil_3) and ``tsoil = "t_soil"``:
    the hint named only 't_soil_3', the last in alphabetical order among equally near names (a
    choice the file does not make: the deepest probe). Now all three are named. The
    scores are equal by difflib itself."""
    ratios = {difflib.SequenceMatcher(None, "t_soil", name).ratio()
              for name in ("t_soil_1", "t_soil_2", "t_soil_3")}
    assert ratios == {2 * 6 / 14}                    # difflib: 6 matched of 6 + 8 characters
    _, records = _tower()
    records = records.assign(t_soil_1=records["t_air"] - 2, t_soil_2=records["t_air"] - 4,
                             t_soil_3=records["t_air"] - 6)
    records.to_csv(tmp_path / "t.csv", index=False)
    with pytest.raises(MissingColumnError,
                       match=r"did you mean one of 't_soil_1', 't_soil_2', 't_soil_3'\? as near "
                             r"as each other: map the one you mean"):
        _read(tmp_path / "t.csv", columns={**MAPPING, "tsoil": "t_soil"})
    frame, _ = _read(tmp_path / "t.csv", columns={**MAPPING, "tsoil": "t_soil_2"})
    np.testing.assert_allclose(frame["tsoil"], records["t_soil_2"])
    # one nearest name is still offered alone
    with pytest.raises(MissingColumnError, match=r"did you mean 't_soil_2'\?\)"):
        _read(tmp_path / "t.csv", columns={**MAPPING, "tsoil": "t_soil_22"})


def test_a_cp1252_header_read_as_latin1_names_the_encoding(tmp_path):
    """A header written in cp1252 with an en dash ("T_Boden–5cm") and the site config's
    ``encoding = "latin-1"``: byte 0x96 becomes the control character U+0096 (Python
    codecs), which no one can type into a config; the hint named the garbled name alone.
    Now it names cp1252, and with it the file reads."""
    assert b"\x96".decode("cp1252") == "\u2013"              # Python codecs: EN DASH
    assert codecs.decode(b"\x96", "latin-1") == "\x96"       # a C1 control character
    _, records = _tower()
    records = records.rename(columns={"t_air": "T_Luft_°C", "co2_flux": "CO2–Fluss"})
    (tmp_path / "t.csv").write_bytes(records.to_csv(index=False).encode("cp1252"))
    columns = {**MAPPING, "tair": "T_Luft_°C", "nee": "CO2–Fluss"}
    with pytest.raises(MissingColumnError, match=r"holds the control character\(s\) U\+0096, "
                       r".*set \[input\] encoding = \"cp1252\""):
        _read(tmp_path / "t.csv", columns=columns, encoding="latin-1")
    frame, _ = _read(tmp_path / "t.csv", columns=columns, encoding="cp1252")
    np.testing.assert_allclose(frame["nee"], records["CO2–Fluss"])


SITE_TOML = """[site]
name = "invented"
latitude = 49.3
longitude = 10.2
utc_offset = 1.0

[input]
path = {path}
time_column = "stamp"
time_format = "%Y-%m-%d %H:%M"
time_marks = "end"

[input.columns]
nee = "co2_flux"
ustar = "us"
rg = "sw"
tair = "t_air"
vpd = "vpd"
"""


@pytest.mark.skipif(os.sep == "\\", reason="Windows reads its own path form")
@pytest.mark.parametrize("written, expected", [
    ("'data\\q.csv'", "write the path with forward slashes"),
    ("'C:\\towers\\q.csv'", "forward slashes .* and give the folder as this machine mounts it"),
    ('"C:/towers/q.csv"', "; give the folder as this machine mounts it"),
    ('"D:/towers/q_*.csv"', "; give the folder as this machine mounts it"),
])
def test_an_input_path_in_windows_form_names_the_fix(tmp_path, written, expected):
    """A site config written on Windows, read on Linux: a backslash is part of a POSIX
    file name and C: names no folder (POSIX.1-2017 (m)). The backslash had its hint; a
    drive letter with forward slashes was "does not exist" alone."""
    (tmp_path / "site.toml").write_text(SITE_TOML.format(path=written))
    with pytest.raises((InputFileError, ConfigError), match=expected):
        read_site_config(tmp_path / "site.toml").read()


@pytest.mark.skipif(os.sep == "\\", reason="Windows reads its own path form")
@pytest.mark.parametrize("written, expected", [
    ("'sites\\a.toml'", "no such file .*; write the path with forward slashes"),
    ("'sites\\*.toml'", "matches no .toml file .*; write the path with forward slashes"),
    ("'C:\\net\\sites\\a.toml'", "forward slashes .* and give the folder as this machine"),
    ('"C:/net/sites/a.toml"', "no such file .*; give the folder as this machine mounts it"),
])
def test_a_network_file_listing_windows_paths_names_the_fix(tmp_path, written, expected):
    """The network file's `sites` in Windows form: refused as "no such file" with no
    fix before (the site config's own `path` had the backslash hint); now the same
    hint, and a drive letter named."""
    (tmp_path / "sites").mkdir()
    (tmp_path / "sites" / "a.toml").write_text(SITE_TOML.format(path='"q.csv"'))
    (tmp_path / "net.toml").write_text(f"[batch]\nsites = [{written}]\n")
    with pytest.raises(ConfigError, match=expected):
        read_sites_file(tmp_path / "net.toml")
    (tmp_path / "net.toml").write_text('[batch]\nsites = ["sites/a.toml"]\n')
    assert [key for key, _ in read_sites_file(tmp_path / "net.toml").sites] == ["a"]


EXAMPLE = Path(__file__).resolve().parents[1] / "examples"


def _example(tmp_path, edit=None, units_line=None, toml_edit=None):
    """The invented Quillmoor example (known truth), edited, with its config beside it."""
    records = pd.read_csv(EXAMPLE / "quillmoor_grassland.csv", dtype=str, keep_default_na=False)
    if edit is not None:
        records = edit(records)
    text = records.to_csv(index=False)
    if units_line is not None:
        head, rest = text.split("\n", 1)
        text = head + "\n" + ",".join(units_line.get(c, "-") for c in records.columns) + "\n" + rest
    (tmp_path / "quillmoor_grassland.csv").write_text(text)
    config = (EXAMPLE / "quillmoor_grassland.toml").read_text()
    (tmp_path / "site.toml").write_text(toml_edit(config) if toml_edit else config)
    return read_site_config(tmp_path / "site.toml").read()


def _scaled_rg(factor):
    def edit(records):
        rg = pd.to_numeric(records["solar_down"])
        records["solar_down"] = np.where(rg == -9999, -9999, (rg * factor).round(1)).astype(str)
        return records
    return edit


def test_rg_summed_over_each_record_is_not_called_ppfd(tmp_path):
    """Rg written as the energy of each 30-minute record (J m-2 = W m-2 x 1800 s; SI:
    1 W = 1 J s-1 (m)) and read as W m-2 was refused as "PPFD: map the column as ppfd",
    a fix that reads it 860 times too bright. PPFD reaches about 2.7 times the potential
    radiation (2.1 µmol J-1 x 1.3); a thousand times it is named as energy per record.
    Rg in kJ m-2 per record (1.8 x W m-2) is hard to tell from PPFD (2.1 x) by its values:
    both are named, the nearer scale first, so the PPFD fix is not the only one offered."""
    with pytest.raises(ImplausibleValueError) as joules:
        _example(tmp_path, edit=_scaled_rg(1800))
    message = str(joules.value)
    assert "nor PPFD" in message and "map the column as ppfd" not in message
    assert "J m-2: 1800 times W m-2 at 30 minutes" in message
    with pytest.raises(ImplausibleValueError) as kilojoules:
        _example(tmp_path, edit=_scaled_rg(1.8))
    message = str(kilojoules.value)
    assert "map the column as ppfd" in message
    assert "kJ m-2 (1.8 times W m-2 at 30 minutes)" in message
    # ordered by the evidence (mistakes47): 1.8 x W m-2 is nearer kJ per record than
    # PPFD's 2.1 x, so kJ comes first; PPFD's own values name PPFD first
    assert message.index("kJ m-2") < message.index("map the column as ppfd")
    # PPFD itself keeps its fix: mapped as ppfd it reads as Rg within 1 % (2.10 µmol J-1)
    with pytest.raises(ImplausibleValueError, match="map the column as ppfd") as ppfd:
        _example(tmp_path, edit=_scaled_rg(2.1))
    message = str(ppfd.value)
    assert message.index("map the column as ppfd") < message.index("kJ m-2")
    frame, _ = _example(tmp_path, edit=_scaled_rg(2.1), toml_edit=lambda text: text.replace(
        'rg = "solar_down"', 'ppfd = "solar_down"'))
    plain, _ = _example(tmp_path)
    bright = plain["rg"] > 50
    np.testing.assert_allclose(frame["rg"][bright], plain["rg"][bright], rtol=0.01)


UNITS = {"stamp_end": "time", "co2_exchange": "umol/m2/s", "solar_down": "W/m2",
         "air_temp_c": "degC", "vpd_kpa": "kPa", "friction_velocity": "m/s",
         "soil_temp_5cm": "degC", "rel_humidity": "%", "qc_co2": "-"}


def test_a_unit_the_file_writes_against_the_unit_read_is_warned(tmp_path):
    """The file labels a column with a unit the reader knows, and the config reads
    another: one of the two is wrong, and where the values do not give it away (°C
    values under a units line of degF, kPa values in a column named "VPD [hPa]" declared
    kPa) the file was read without a word. Now warned, naming the column, both units and
    the setting; labels that agree (other spellings of one unit: "umol/m2/s" for
    µmol m-2 s-1, "W/m2", "degC", BIPM SI brochure (m)) give no warning, and the frame is
    the plain file's either way."""
    plain, _ = _example(tmp_path)
    agreeing = lambda text: text.replace("[input]\n", "[input]\nrows_after_header = 1\n")  # noqa: E731
    frame, report = _example(tmp_path, units_line=UNITS, toml_edit=agreeing)
    pd.testing.assert_frame_equal(frame, plain)
    assert report.warnings == ()
    # since round unitsrow a unit the units line writes is read where [input.units] names
    # none: °C values under "degF" then give away the wrong label (the soil check)
    with pytest.raises(ImplausibleValueError, match=r"the values look like °C: set \[input"
                       r"\.units\] tair = \"°C\".*read in 'degF' as the file's units row"):
        _example(tmp_path, units_line={**UNITS, "air_temp_c": "degF"}, toml_edit=agreeing)
    # declared, the label against it is warned as before
    frame, report = _example(tmp_path, units_line={**UNITS, "air_temp_c": "degF"},
                             toml_edit=lambda text: agreeing(text).replace(
                                 "[input.units]\n", '[input.units]\ntair = "degC"\n'))
    pd.testing.assert_frame_equal(frame, plain)
    assert len(report.warnings) == 1
    assert ("column 'air_temp_c' (tair) is labelled 'degF' by the units line of"
            in report.warnings[0])
    assert 'set [input.units] tair = "degF"' in report.warnings[0]
    named = lambda text: text.replace('vpd = "vpd_kpa"', 'vpd = "VPD [hPa]"')  # noqa: E731
    frame, report = _example(
        tmp_path, edit=lambda r: r.rename(columns={"vpd_kpa": "VPD [hPa]"}), toml_edit=named)
    pd.testing.assert_frame_equal(frame, plain)
    assert len(report.warnings) == 1
    assert ("column 'VPD [hPa]' (vpd) is labelled 'hPa' by its name but read as 'kPa' "
            '([input.units] vpd = "kPa")') in report.warnings[0]
    frame, report = _example(
        tmp_path, edit=lambda r: r.rename(columns={"vpd_kpa": "VPD (kPa)"}),
        toml_edit=lambda text: text.replace('vpd = "vpd_kpa"', 'vpd = "VPD (kPa)"'))
    assert report.warnings == ()
    # a sensor's number in parentheses is no unit (RH's "1" would read as a fraction)
    frame, report = _example(
        tmp_path, edit=lambda r: r.rename(columns={"rel_humidity": "RH (1)"}),
        toml_edit=lambda text: text.replace('rh = "rel_humidity"', 'rh = "RH (1)"'))
    pd.testing.assert_frame_equal(frame, plain)
    assert report.warnings == ()


@pytest.mark.parametrize("minutes, before, after", [(-15, 15, 15), (-10, 20, 10), (10, 10, 20)])
def test_a_met_file_stamped_at_another_point_of_the_interval_is_named(tmp_path, minutes,
                                                                      before, after):
    """A flux logger stamping the end of each 30-minute record beside a meteorological
    logger stamping its middle (15 minutes earlier; common practice differs between
    logger programs): the same interval, no shared stamp. It was refused with "average
    that file to the others' records", which cannot help; now the offset is named with
    the one time_marks every file shares."""
    starts, records = _tower()
    flux = records[["stamp", "co2_flux", "us"]]
    met = records[["stamp", "sw", "t_air", "vpd"]].copy()
    met["stamp"] = (starts + pd.Timedelta(minutes=30 + minutes)).strftime("%Y-%m-%d %H:%M")
    flux.to_csv(tmp_path / "flux.csv", index=False)
    met.to_csv(tmp_path / "met.csv", index=False)
    with pytest.raises(MissingColumnError) as refused:
        _read([tmp_path / "flux.csv", tmp_path / "met.csv"])
    message = str(refused.value)
    assert (f"with the same 30-minute records, its stamps {before} minutes before those of "
            f"'{tmp_path / 'met.csv'}' (or {after} after)") in message
    assert "[input] time_marks for every file" in message
    assert "average that file" not in message
    # the same files on one grid are joined, the values as written (known truth)
    met["stamp"] = records["stamp"]
    met.to_csv(tmp_path / "met.csv", index=False)
    frame, _ = _read([tmp_path / "flux.csv", tmp_path / "met.csv"])
    np.testing.assert_array_equal(frame["rg"], records["sw"])
