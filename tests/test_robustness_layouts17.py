"""Logger layouts of the layouts17 round: a unit spelled "C" that skipped the checks of
°C, unit notations of logger units lines, an hourly meteorological file joined to
half-hourly flux files, a civil-time file sorted by its stamps, a file of another
delimiter whose rows split at decimal commas, and stamps finer than their format.

Outside facts, each named beside its check: °C = (°F - 32) x 5/9 (NIST SP 811, appendix
B (m)); the SI brochure (BIPM 2019, 9th edition, section 5.4.6 (m)): ``m/s``, ``m s-1``
and ``m·s⁻¹`` write one unit; the IANA time-zone database as shipped with Python's
``zoneinfo`` (Europe/Berlin left summer time at 03:00 CEST = 02:00 CET on 2021-10-31);
ISO 8601:2004, section 4.1.2.3 (m): the ordinal date ``YYYY-DDD``; RFC 4180 (m): the
fields of a line are separated by one delimiter, while a decimal comma locale writes ";"
(common practice).
"""

import re

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import (
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
    UnitError,
)
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.timestamps import parse_stamps
from fluxpart.variables import reads_as_canonical, unit_spelling

MAPPING = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
           "ustar": "u_fric", "tsoil": "t_soil"}
MET = ["sw_down", "t_air", "vpd_air", "t_soil"]
SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)


def _records(starts, seed=1):
    """Invented tower records at interval starts `starts`, file columns of MAPPING."""
    rng = np.random.default_rng(seed)
    hour = starts.hour + starts.minute / 60
    daylight = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    n = len(starts)
    return pd.DataFrame({
        "co2_flux": np.round(3 - 15 * daylight + rng.normal(0, 1.5, n), 3),
        "sw_down": np.round(800 * daylight, 1),
        "t_air": np.round(12 + 8 * daylight + rng.normal(0, 0.3, n), 2),
        "vpd_air": np.round(2 + 14 * daylight, 2),
        "u_fric": np.round(rng.uniform(0.05, 0.8, n), 3),
        "t_soil": np.round(11 + 2 * daylight, 2),
    }, index=starts)


def _write(path, records, stamps, sep=","):
    out = records.copy()
    out.insert(0, "stamp", list(stamps))
    out.to_csv(path, index=False, sep=sep)
    return path


def _read(paths, **kwargs):
    options = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
               "time_marks": "end"}
    options.update(kwargs)
    return read_table(paths, **options)


def _year(tmp_path, days=90):
    starts = pd.date_range("2021-05-01 00:00", periods=48 * days, freq="30min")
    records = _records(starts)
    ends = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    return starts, records, ends


def test_a_celsius_unit_spelled_c_gets_the_checks_of_celsius(tmp_path):
    """`tsoil = "C"` (an accepted spelling of °C, as logger units lines write it: common
    practice) skipped the soil-in-°F check that `"°C"` and `"degC"` get: a soil file in
    °F was read 1.8 T + 32 too warm without a word at a cool site, and at a warmer one
    stopped in the respiration stage naming an internal column. °F = 1.8 °C + 32
    (NIST SP 811 (m))."""
    starts, records, ends = _year(tmp_path)
    in_f = records.copy()
    in_f["t_soil"] = np.round(records["t_soil"] * 1.8 + 32.0, 2)
    path = _write(tmp_path / "f.csv", in_f, ends)
    for spelling in ("C", "°C", "degC", "deg C"):
        with pytest.raises(ImplausibleValueError, match=r"'t_soil' \(tsoil, read as °C\).*"
                           r'look like °F.*tsoil = "°F"'):
            _read(path, units={"tsoil": spelling})
    frame, _ = _read(path, units={"tsoil": "°F"})
    assert np.allclose(frame["tsoil"].to_numpy(), records["t_soil"].to_numpy(), atol=0.006)
    # the spellings the reader keeps as written, and those it converts
    assert reads_as_canonical("tair", "C") and reads_as_canonical("rg", "W/m2")
    assert not reads_as_canonical("tair", "K") and not reads_as_canonical("rg", "MJ m-2")
    assert not reads_as_canonical("nee", "g C m-2") and reads_as_canonical("nee", None)


@pytest.mark.parametrize("name, written, accepted", [
    ("nee", "umol/m^2/s", "umol m-2 s-1"),
    ("nee", "µmol/m²/s", "µmol m-2 s-1"),
    ("nee", "umol m^-2 s^-1", "umol m-2 s-1"),
    ("nee", "µmol CO2 m-2 s-1", "µmol m-2 s-1"),
    ("nee", "mg CO2/m2/s", "mg CO2 m-2 s-1"),
    ("rg", "W/m^2", "W m-2"),
    ("rg", "kW/m2", "kW m-2"),
    ("tair", "Deg C", "°C"),
    ("tair", "degrees F", "°F"),
    ("tsoil", "Celsius", "°C"),
    ("ustar", "m s^-1", "m s-1"),
])
def test_unit_notations_of_units_lines_are_accepted(name, written, accepted):
    """Units as logger units lines and papers write them: a solidus for negative
    exponents, a caret, the species of a molar flux, a degree word. One unit in each
    notation (SI brochure, section 5.4.6 (m)); they had been refused with the list of
    accepted spellings."""
    assert unit_spelling(name, written) == accepted


def test_unit_notations_convert_as_their_accepted_spelling(tmp_path):
    """A file read with the notations gives the same frame as with the accepted
    spellings; a unit naming no quantity the reader knows is still refused."""
    starts, records, ends = _year(tmp_path, days=61)
    path = _write(tmp_path / "a.csv", records, ends)
    plain, _ = _read(path, units={"nee": "umol m-2 s-1", "rg": "W m-2", "tair": "°C"})
    noted, _ = _read(path, units={"nee": "umol/m^2/s", "rg": "W/m^2", "tair": "Deg C"})
    pd.testing.assert_frame_equal(plain, noted)
    # mg of what (CO2 or C)? not guessed
    with pytest.raises(UnitError, match='nee = "mg/m2/s" is not a known unit'):
        _read(path, units={"nee": "mg/m2/s"})


def test_an_hourly_met_file_beside_half_hourly_flux_files_is_refused(tmp_path):
    """A meteorological logger storing hourly records beside a flux logger's half-hourly
    ones: every met stamp is a flux stamp, so the files were joined by stamp and every
    other record read without Rg, temperatures and VPD, with only the join warning (the
    invented example: annual NEE -243.00 for -241.39 g C m-2, daytime Reco +29.7, the
    clock check unable to judge). Now refused, naming both intervals."""
    starts, records, ends = _year(tmp_path, days=61)
    flux = records[["co2_flux", "u_fric"]]
    hourly = starts.minute == 30          # interval starts :30 -> end stamps on the hour
    met = records.loc[hourly, MET]
    _write(tmp_path / "flux.csv", flux, ends)
    _write(tmp_path / "met.csv", met, ends[hourly])
    with pytest.raises(MissingColumnError, match=r"with records every (30|60) minutes in "
                       r"'.*(flux|met).csv', where '.*(met|flux).csv' hold them every "
                       r"(60|30) minutes: files of one period .* same record interval"):
        _read([tmp_path / "flux.csv", tmp_path / "met.csv"])
    # known truth: at one interval the files join to the one-file record
    _write(tmp_path / "met.csv", records[MET], ends)
    joined, _ = _read([tmp_path / "flux.csv", tmp_path / "met.csv"])
    one, _ = _read(_write(tmp_path / "one.csv", records, ends))
    pd.testing.assert_frame_equal(joined, one)


def _civil_stamps(starts, zone="Europe/Berlin", utc_offset=1):
    """End stamps in the civil time of `zone` for interval starts in standard time."""
    utc = (starts + pd.Timedelta(minutes=30) - pd.Timedelta(hours=utc_offset))
    return utc.tz_localize("UTC").tz_convert(zone).tz_localize(None)


def test_a_civil_time_file_sorted_by_stamp_names_the_repeated_hour(tmp_path):
    """Europe/Berlin repeats 02:00-03:00 on 2021-10-31 (IANA database via zoneinfo; the
    invented Rg, a noon of 800 W m-2 in autumn, is accepted as declared). A
    file sorted by its civil stamps interleaves the summer-time and standard-time records
    of that hour; the refusal said "sort a copy of the file by time", which it is. Now
    it names the repeated hour, the setting and the order to restore; in the logger's
    order the same records read to the true standard-time starts."""
    starts = pd.date_range("2021-10-25 00:00", "2021-11-05 23:30", freq="30min")
    records = _records(starts)
    civil = _civil_stamps(starts)
    text = civil.strftime("%Y-%m-%d %H:%M")
    order = np.argsort(civil.to_numpy(), kind="stable")
    sorted_path = _write(tmp_path / "sorted.csv", records.iloc[order], text[order])
    with pytest.raises(NonMonotonicTimestampError) as caught:
        _read(sorted_path, time_zone="Europe/Berlin", site=SITE)
    message = str(caught.value)
    assert "time_zone the autumn hour repeats" in message
    assert "sort a copy" not in message
    logger, _ = _read(_write(tmp_path / "logger.csv", records, text),
                      time_zone="Europe/Berlin", site=SITE, accept_units=("rg",))
    assert logger.index.equals(pd.DatetimeIndex(starts, name="time"))


def test_a_semicolon_file_with_decimal_commas_names_its_delimiter(tmp_path):
    """A ";" file with decimal commas read with the default ",": its lines split at the
    decimal commas, as many fields as each line's values hold commas. Where the first
    record has a missing code (fewer commas than the next), the parser stopped with
    "line N has 8 fields where the header has 7 ... a delimiter inside a value?"; now
    the delimiter is named, as where the first record splits widest."""
    starts, records, ends = _year(tmp_path, days=5)
    text = records.astype(str).apply(lambda col: col.str.replace(".", ",", regex=False))
    text.iloc[0, 0] = "-9999"
    path = _write(tmp_path / "semi.csv", text, ends, sep=";")
    with pytest.raises(InputFileError, match=r'the header is one cell holding ";" and the '
                       r'data lines split at their commas: set \[input\] delimiter = ";"'):
        _read(path, missing=(-9999,))
    frame, _ = _read(path, delimiter=";", decimal=",", missing=(-9999,))
    assert np.isnan(frame["nee"].iloc[0])
    assert np.allclose(frame["nee"].iloc[1:], records["co2_flux"].iloc[1:])


def _parse(text, time_format):
    series = pd.Series(text)
    return parse_stamps(series, time_format, time_columns=("stamp",), source="t.dat",
                        lines=np.arange(2, len(series) + 2)).stamps


@pytest.mark.parametrize("stamps, time_format, wanted", [
    # places of zero alone (".000", ":00") are read past since layouts40
    # (test_robustness_layouts40); others are named as before
    (["2021-06-01 00:30:00.250", "2021-06-01 01:00:00.000"], "%Y-%m-%d %H:%M:%S",
     "%Y-%m-%d %H:%M:%S.%f"),
    (["2021-06-01 00:30:02", "2021-06-01 01:00:00"], "%Y-%m-%d %H:%M", "%Y-%m-%d %H:%M:%S"),
    (["2021-152T00:30", "2021-152T01:00"], "ISO8601", "%Y-%jT%H:%M"),
])
def test_stamps_finer_than_their_format_name_the_format_that_reads_them(
        stamps, time_format, wanted):
    """Stamps with milliseconds (".000", as databases write them) under "%S" were told
    "the time fields are whole numbers written with a decimal fraction ... write them as
    integers"; seconds under "%M", and ISO 8601 ordinal dates (ISO 8601:2004 4.1.2.3 (m))
    under "ISO8601" got no hint. The named format reads every stamp at its time
    (2021-152 is 1 June: 31 + 28 + 31 + 30 + 31 = 151 days before it, Gregorian
    calendar)."""
    with pytest.raises(TimestampError, match=re.escape(f"set time_format = \"{wanted}\"")) \
            as caught:
        _parse(stamps, time_format)
    assert "integers" not in str(caught.value)
    assert list(_parse(stamps, wanted)) == [pd.Timestamp("2021-06-01 00:30"),
                                            pd.Timestamp("2021-06-01 01:00")]


def test_a_month_of_soil_in_fahrenheit_is_named(tmp_path):
    """A soil temperature written in °F for one month (a logger program changed for a
    while): the whole record's median hides it, and it was read 1.8 T + 32 too warm
    without a word (the invented example's July: with respiration_driver = "tsoil",
    daytime Reco +38.6 and nighttime Reco +12.8 g C m-2). The month alone fails the
    soil-against-air check (°F = 1.8 °C + 32, NIST SP 811 (m)) and is named; a record
    in °C throughout gets no such warning (known truth)."""
    starts = pd.date_range("2021-05-01 00:00", periods=48 * 92, freq="30min")
    records = _records(starts)
    records["t_soil"] = np.round(records["t_air"] - 1.0, 2)
    ends = (starts + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    _, plain = _read(_write(tmp_path / "c.csv", records, ends))
    assert not [w for w in plain.warnings if "tsoil" in w]
    june = np.asarray(starts.month == 6)
    records.loc[june, "t_soil"] = np.round(records.loc[june, "t_soil"] * 1.8 + 32.0, 2)
    _, report = _read(_write(tmp_path / "f.csv", records, ends))
    assert any("(tsoil): in 1 month(s) (2021-06) the values alone look like a soil "
               "temperature in °F or K" in w for w in report.warnings)


def test_a_soil_the_reader_keeps_is_not_refused_by_the_respiration_fit():
    """A desert soil near the surface reaches 70-80 °C in summer (the ground surface of
    Death Valley above 90 °C (m)); the reader and the screening keep soil values up to
    their plausible maximum, but the nighttime fit refused a driver above 70 °C as "not
    in °C", stopping the run with "temperature_measured: ... values outside -90..70 °C,
    first at row N" (an argument name and a row of the frame, not a column or line of
    the file). Its limit now reaches the reader's; kelvin is still refused."""
    from fluxpart.partition.nighttime import _as_temperature
    from fluxpart.variables import VARIABLES
    hottest = VARIABLES["tsoil"].maximum
    values = np.array([20.0, 55.0, hottest - 0.5, hottest])
    assert np.array_equal(_as_temperature("temperature", values, 4), values)
    with pytest.raises(ImplausibleValueError, match="kelvin"):
        _as_temperature("temperature", values + 273.15, 4)


@pytest.mark.parametrize("declared, step, fix", [
    (60, 30, "set interval_minutes = 30, or remove it"),
    (30, 10, "average the file to 30 or 60 minutes first"),
])
def test_a_declared_interval_at_odds_with_the_stamps_names_the_setting(
        tmp_path, declared, step, fix):
    """`interval_minutes = 60` on a file of 30-minute records was refused as "stamps are 30
    minutes apart ... not a whole multiple of the 60-minute interval", without naming the
    setting the 60 came from; every step of the file is off it. Now the setting and the
    file's own step are named (the steps counted on invented stamps: known truth)."""
    starts = pd.date_range("2021-06-01 00:00", periods=48 * 3 * 30 // step, freq=f"{step}min")
    records = _records(starts)
    ends = (starts + pd.Timedelta(minutes=step)).strftime("%Y-%m-%d %H:%M")
    path = _write(tmp_path / "a.csv", records, ends)
    with pytest.raises(SpacingError, match=re.escape(
            f"[input] interval_minutes = {declared} is set, while most stamps are {step} "
            f"minutes apart: ") + ".*" + re.escape(fix)):
        _read(path, interval_minutes=declared)


@pytest.mark.parametrize("origin, shift, named", [
    ("MATLAB", 719529.0, "MATLAB day numbers (datenum, days since year 0)"),
    ("Julian", 2440587.5, "Julian dates (days since noon UTC of 1 January 4713 BC)"),
])
def test_matlab_and_julian_day_numbers_are_named_with_their_date(origin, shift, named):
    """Stamps exported as MATLAB datenums (719529 = 1970-01-01, MATLAB documentation (m))
    or astronomers' Julian dates (2440587.5 = 1970-01-01 00:00 UT, Meeus 1998 (m)) had
    been told "decimal fractions (a decimal day of year or hour?)"; now the count is
    named with the date of the first stamp, as for Unix time and spreadsheet days."""
    ends = pd.date_range("2021-06-01 00:30", periods=96, freq="30min")
    days = (ends - pd.Timestamp("1970-01-01")) / pd.Timedelta(days=1) + shift
    with pytest.raises(TimestampError, match=re.escape(named) + r", not dates \('[\d.]+' is "
                       r"2021-06-01 00:30"):
        _parse([f"{d:.6f}" for d in days], "%Y%m%d%H%M")


@pytest.mark.parametrize("change", ["removed", "added"])
def test_a_column_changed_mid_file_without_a_new_header_is_named(tmp_path, change):
    """A logger program that removes or adds a column mid-file and writes no new header
    line leaves every later line one field short or long (RFC 4180 (m): each line should
    hold the same number of fields as the header). It was refused at the first such line
    as "a record cut short may hold a value cut mid-number; 4320 such line(s)" or "a
    delimiter inside a value, or two records run together"; now the run of lines to the
    end and the split are named. A single long or short line keeps its message."""
    starts, records, ends = _year(tmp_path, days=90)
    path = _write(tmp_path / "a.csv", records, ends)
    lines = path.read_text().splitlines()
    for i in range(2161, len(lines)):
        fields = lines[i].split(",")
        if change == "removed":
            del fields[3]
        else:
            fields.insert(3, "7.5")
        lines[i] = ",".join(fields)
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputFileError, match=re.escape(
            f"every line from line 2162 on ({len(lines) - 2161} lines) has "
            f"{8 if change == 'added' else 6} fields where the header has 7: a logger program "
            f"that {change} a column and wrote no new header line? Split the file at line "
            "2162")):
        _read(path)
    one = path.read_text().splitlines()[:2162] + _write(
        tmp_path / "b.csv", records, ends).read_text().splitlines()[2162:]
    path.write_text("\n".join(one) + "\n")
    with pytest.raises(InputFileError) as caught:
        _read(path)
    assert "line 2162" in str(caught.value) and "every line from" not in str(caught.value)
