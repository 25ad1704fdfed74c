"""Layouts of the layouts34 round.

Outside facts, each named beside its check: a profile system measures air temperature and
CO2 at several heights on one mast, and such files name each height in the column's name
(tair_2m, tair_10m, tair_30m: common practice); towers running an open-path and a
closed-path analyser side by side write one flux column per analyser (common practice).
The two readings differ: an open-path flux needs a heating correction the closed path does
not (Burba et al. 2008, Global Change Biology 14, 1854-1876 (m)), so which column is NEE
moves the budget. Everything else is invented known truth: the records as written.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import (
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
)
from fluxpart.io import _near, read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)


def _write(path, names, count=48 * 20, seed=34):
    """Invented half-hourly records, one column per name, plausible for each kind."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rng = np.random.default_rng(seed)
    day = np.sin((hour - 6) / 12 * np.pi)
    kinds = {"co2_flux":
             lambda: (3 - 12 * np.clip(day, 0, None) + rng.normal(0, 1, count)).round(3),
             "us": lambda: (0.3 + 0.1 * rng.random(count)).round(3),
             "sw": lambda: (np.clip(800 * day, 0, None) + 1.0).round(1),
             "t_air": lambda: (15 + 6 * day + rng.normal(0, 0.2, count)).round(2),
             "vpd": lambda: (0.8 + 0.6 * np.clip(day, 0, None)).round(3)}
    columns = {}
    for name in names:
        kind = next(k for k in kinds if name.casefold().startswith(k))
        columns[name] = kinds[kind]()
    lines = ["stamp," + ",".join(names)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{columns[n][i]:g}" for n in names)
              for i, e in enumerate(ends)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _read(path, mapping):
    return read_table(path, columns=mapping, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end",
                      units={"vpd": "kPa"}, site=SITE)


# ------------------------------------------------ a profile's heights, two analysers
def test_a_profile_of_heights_names_every_height_not_the_shortest(tmp_path):
    """Before: `tair = "t_air"` over a profile file (t_air_2m, t_air_10m,
    t_air_30m) was told "did you
    mean 't_air_2m'?", the shortest name (difflib's nearest), one height of three chosen by
    the hint; now every height is named and the choice left to the user."""
    names = ["co2_flux", "us", "sw", "t_air_2m", "t_air_10m", "t_air_30m", "vpd"]
    path = _write(tmp_path / "profile.csv", names)
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    with pytest.raises(MissingColumnError) as caught:
        _read(path, mapping)
    message = str(caught.value)
    assert "did you mean one of 't_air_2m', 't_air_10m', 't_air_30m'?" in message
    assert "3 columns carry the name" in message and "map the one you mean" in message
    # the height named is read as written (known truth: the column's own values)
    table, _ = _read(path, mapping | {"tair": "t_air_10m"})
    written = pd.read_csv(path)["t_air_10m"].to_numpy()
    assert np.array_equal(table["tair"].to_numpy(), written)


def test_two_analysers_name_both_fluxes_not_the_shorter(tmp_path):
    """Before: `nee = "co2_flux"` over co2_flux_open and co2_flux_closed (two
    analysers) was told "did you
    mean 'co2_flux_open'?", the shorter name; an open-path flux needs a correction the closed
    path does not (Burba et al. 2008 (m)), so both are named."""
    names = ["co2_flux_closed", "co2_flux_open", "us", "sw", "t_air", "vpd"]
    path = _write(tmp_path / "two.csv", names)
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    with pytest.raises(MissingColumnError) as caught:
        _read(path, mapping)
    message = str(caught.value)
    assert "did you mean one of 'co2_flux_closed', 'co2_flux_open'?" in message
    assert "did you mean 'co2_flux_open'" not in message


def test_the_many_suffixes_rule_on_its_own():
    """One column with a prefix or suffix is still suggested alone (layouts31's site code);
    an exact name in another case is still preferred over the suffixed ones; a name far
    from every column still gets no suggestion."""
    assert _near("co2_flux", ["QMG_logger1_co2_flux", "QMG_logger1_t_air"]) == (
        " (did you mean 'QMG_logger1_co2_flux'? the file's name carries the prefix "
        "'QMG_logger1_')")
    assert _near("co2_flux", ["CO2_FLUX", "co2_flux_open", "co2_flux_closed"]) == (
        " (did you mean 'CO2_FLUX'?)")
    several = _near("t_air", ["st_air", "t_air_2m", "t_air_10m"])
    assert several.startswith(" (did you mean one of 't_air_2m', 't_air_10m', 'st_air'?")
    assert _near("ustar", ["zz", "qq"]) == ""


def test_one_flux_in_two_units_names_both_columns(tmp_path):
    """Before: `nee = "NEE"` over "NEE (umol m-2 s-1)" and "NEE (mg m-2 s-1)" (one flux
    written in two units) was told to map the mg column, the shorter name; 1 mg CO2 m-2
    s-1 is 22.7 umol m-2 s-1 (molar mass of CO2 44.01 g mol-1, IUPAC (m)), so both are
    named."""
    path = tmp_path / "units.csv"
    _write(path, ["co2_flux", "us", "sw", "t_air", "vpd"])
    text = path.read_text(encoding="utf-8").splitlines()
    flux = pd.read_csv(path)["co2_flux"].to_numpy()
    header = "stamp,NEE (umol m-2 s-1),NEE (mg m-2 s-1)," + text[0].split(",", 2)[2]
    rows = [f"{line.split(',', 2)[0]},{line.split(',', 2)[1]},{f * 44.01e-3:.5f},"
            f"{line.split(',', 2)[2]}" for line, f in zip(text[1:], flux, strict=True)]
    path.write_text("\n".join([header] + rows) + "\n", encoding="utf-8")
    mapping = {"nee": "NEE", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    with pytest.raises(MissingColumnError) as caught:
        _read(path, mapping)
    message = str(caught.value)
    assert "did you mean one of 'NEE (umol m-2 s-1)', 'NEE (mg m-2 s-1)'?" in message
    table, _ = _read(path, mapping | {"nee": "NEE (umol m-2 s-1)"})
    assert np.array_equal(table["nee"].to_numpy(), flux)


# ------------------------------------------------------- a block of comment lines at the end
def test_a_block_of_comment_lines_ending_the_file_is_dropped_as_a_footer(tmp_path):
    """Before: three comment lines closing a file ("# end of file", a record count, a
    checksum) were refused as "a comment line among the records", where one such line is
    dropped with a warning as a footer; now the block is dropped, named, and every record
    is read as written (known truth: the records before it)."""
    names = ["co2_flux", "us", "sw", "t_air", "vpd"]
    plain = _write(tmp_path / "plain.csv", names)
    footed = tmp_path / "footed.csv"
    footed.write_text(plain.read_text(encoding="utf-8")
                      + "# end of file\n# records: 960\n# checksum 3f2a\n", encoding="utf-8")
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    expected, _ = _read(plain, mapping)
    table, report = _read(footed, mapping)
    pd.testing.assert_frame_equal(table, expected)
    assert any("its last 3 lines (962 to 964: '# end of file', ...) are comment lines "
               "ending the file, a footer: dropped" in w for w in report.notes)


def test_comment_lines_among_the_records_are_skipped_and_named(tmp_path):
    """A comment between records (a logger restart's note) was refused, naming it, until
    layouts37; now skipped where the file's notes share one mark that no record starts
    with, named in the warnings, and every record read (known truth: the records as
    written); the footer line is dropped as before."""
    names = ["co2_flux", "us", "sw", "t_air", "vpd"]
    plain = _write(tmp_path / "plain.csv", names)
    path = _write(tmp_path / "notes.csv", names)
    lines = path.read_text(encoding="utf-8").splitlines()
    lines[400:400] = ["# logger restarted", "# program qm_v2"]
    path.write_text("\n".join(lines) + "\n# end of file\n", encoding="utf-8")
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    expected, _ = _read(plain, mapping)
    table, report = _read(path, mapping)
    pd.testing.assert_frame_equal(table, expected)
    assert any("lines 401-402: '# logger restarted'" in w for w in report.warnings)
    assert any("'# end of file'" in w and "dropped" in w for w in report.warnings)


# ------------------------------------------------- net radiation of a cloudy site as rg
@pytest.fixture(scope="module")
def demo_frame():
    from fluxpart import demo

    frame, _ = demo.site_year(seed=2)       # the invented Quillmoor site
    return frame


def test_net_radiation_of_a_cloudy_site_mapped_as_rg_is_named_as_net_radiation(demo_frame):
    """Before: net radiation whose night median is only -15 W m-2 (a cloudy site; under a
    clear sky it is -30 to -100 W m-2, near 0 under cloud (m)) mapped as rg passed the
    night check (-20 W m-2) and was refused as "PAR in W m-2 ... or a shaded or soiled
    sensor", neither of which reads below 0 at night beyond a pyranometer's thermal offset
    of 0 to about -10 W m-2 (m); now net radiation is named too. By day net radiation over
    vegetation is roughly 0.6 of global radiation less the long-wave loss (common
    practice). PAR in W m-2 (0.46 of global radiation (m)), about 0 at night, is still
    named without it."""
    from fluxpart import demo
    from fluxpart.solar import potential_radiation
    from fluxpart.unit_checks import mixup_messages

    site = demo.SITE
    potential = potential_radiation(demo_frame.index, site.latitude, site.longitude,
                                    site.utc_offset, interval_minutes=30)
    names = ("nee", "rg", "tair", "vpd")
    converted = {n: demo_frame[n].to_numpy(float) for n in names}
    rg = converted["rg"]
    noise = np.random.default_rng(34).normal(0, 6, rg.size)
    net = np.where(potential > 0, 0.6 * rg - 20, -15 + noise)
    refusals, _ = mixup_messages(converted | {"rg": net}, {}, {n: n for n in names}, 30,
                                 potential)
    message = refusals.get("rg", "")
    assert "the values look like net radiation (with the sun down its median is -15 W m-2" \
        in message, refusals
    assert "PAR in W m-2" in message
    par = np.where(potential > 0, 0.46 * rg, np.abs(noise) / 6)
    refusals, _ = mixup_messages(converted | {"rg": par}, {}, {n: n for n in names}, 30,
                                 potential)
    assert "the values look like PAR in W m-2" in refusals.get("rg", ""), refusals
    assert "net radiation" not in refusals["rg"]


# ----------------------------------------- a delimiter closing every line from mid-file on
def test_a_delimiter_closing_every_line_from_mid_file_on_is_read_as_no_column(tmp_path):
    """Before: where an export setting changed mid-file and every line from there on
    ended with the delimiter (an empty field after the last value), the file was refused
    as "a logger program that added a column"; the whole file so written is read with the
    empty field as no column, and so now is the part: the records are read as written
    (known truth), with a warning naming the line. A column really added (values in the
    extra field) stays refused."""
    names = ["co2_flux", "us", "sw", "t_air", "vpd"]
    plain = _write(tmp_path / "plain.csv", names)
    lines = plain.read_text(encoding="utf-8").splitlines()
    closed = tmp_path / "closed.csv"
    closed.write_text("\n".join(lines[:500] + [line + "," for line in lines[500:]]) + "\n",
                      encoding="utf-8")
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    expected, _ = _read(plain, mapping)
    table, report = _read(closed, mapping)
    pd.testing.assert_frame_equal(table, expected)
    assert any("every line from line 501 on (461 lines) ends with the delimiter ','" in w
               and "read as no column" in w for w in report.notes)
    added = tmp_path / "added.csv"
    added.write_text("\n".join(lines[:500] + [line + ",7.5" for line in lines[500:]]) + "\n",
                     encoding="utf-8")
    with pytest.raises(InputFileError, match="a logger program that added a column"):
        _read(added, mapping)


# ------------------------------------------------------------ a file written newest first
def test_a_file_written_newest_first_is_read_oldest_first(tmp_path):
    """Before layouts34: a file whose every step goes back in time (an export sorted
    descending) was named by its first step back alone; layouts34 named it "newest first"
    and refused it; since layouts38 it is read oldest first, the frame the plain file's,
    with a warning. Stamps of an interval's end increase with time (common practice: any
    time series)."""
    names = ["co2_flux", "us", "sw", "t_air", "vpd"]
    path = _write(tmp_path / "plain.csv", names)
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    expected, _ = _read(path, mapping)
    lines = path.read_text(encoding="utf-8").splitlines()
    path.write_text("\n".join(lines[:1] + lines[:0:-1]) + "\n", encoding="utf-8")
    table, report = _read(path, mapping)
    pd.testing.assert_frame_equal(table, expected)
    assert any("is written newest first (the stamps go back in time from line to line): "
               "read oldest first" in w for w in report.notes)
    # one record out of place is not named so
    lines = _write(tmp_path / "plain.csv", names).read_text(encoding="utf-8").splitlines()
    lines[10], lines[11] = lines[11], lines[10]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(path, mapping)
    assert "newest first" not in str(caught.value)


# ------------------------------------------------------------------ u* in centimetres
def test_ustar_in_centimetres_per_second_is_named_and_read_declared(tmp_path):
    """Before: u* written in cm s-1 (median 24 for 0.24 m s-1) was refused as out of range
    with "check the column mapping and [input.units]", which held no unit to declare; now
    the refusal names `ustar = "cm s-1"` and the unit is read (1 cm = 0.01 m, SI)."""
    names = ["co2_flux", "us", "sw", "t_air", "vpd"]
    plain = _write(tmp_path / "plain.csv", names)
    frame = pd.read_csv(plain)
    frame["us"] = (frame["us"] * 100).round(1)
    centi = tmp_path / "centi.csv"
    frame.to_csv(centi, index=False)
    mapping = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
    with pytest.raises(ImplausibleValueError,
                       match=r"the values look like 'cm s-1': set \[input.units\] ustar = "
                             r"\"cm s-1\""):
        _read(centi, mapping)
    table, _ = read_table(centi, columns=mapping, time_column="stamp",
                          time_format="%Y-%m-%d %H:%M", time_marks="end",
                          units={"vpd": "kPa", "ustar": "cm s-1"}, site=SITE)
    expected, _ = _read(plain, mapping)
    np.testing.assert_allclose(table["ustar"].to_numpy(), expected["ustar"].to_numpy(),
                               rtol=1e-15, atol=0)
