"""Layouts of the layouts32 round.

Outside facts, each named beside its check: VPD is the saturation vapour pressure less the
actual one, so it is never below 0 and is 0 where the air is saturated (RH 100 %; any
textbook of micrometeorology, e.g. Campbell & Norman 1998, ch. 3 (m)); the saturation
vapour pressure over water after Tetens (1930) as given by Murray (1967),
0.61078 exp(17.27 T / (T + 237.3)) kPa (m). Everything else is invented known truth: the
records as written.
"""

import math

import numpy as np
import pandas as pd
import pytest

from fluxpart.code_values import BOUND_NEAR, ordinary_code_message
from fluxpart.errors import ConfigError, ImplausibleValueError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd", "rh": "rh"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd", "rh"]


def _saturation_kpa(t_c):
    """Tetens (1930) after Murray (1967) (m) [kPa]."""
    return 0.61078 * np.exp(17.27 * t_c / (t_c + 237.3))


def _humid_records(count=48 * 120, seed=32):
    """Invented half-hourly records: RH swinging with the day and a slow weather cycle,
    clamped at 100 % (a humidity sensor's output limit), VPD computed from it as a logger
    program does, so exactly 0 at every saturated record."""
    ends = pd.date_range("2021-09-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rng = np.random.default_rng(seed)
    ta = (12 + 6 * np.sin((hour - 9) / 12 * np.pi) + rng.normal(0, 0.2, count)).round(2)
    weather = 8 * np.sin(np.arange(count) / 48 / 3.0)
    rh = np.clip(79 - 14 * np.sin((hour - 9) / 12 * np.pi) + weather
                 + rng.normal(0, 1.0, count), 20, 100).round(1)
    vpd = (_saturation_kpa(ta) * (1 - rh / 100)).round(4)
    fc = (2.0 + rng.normal(0, 0.5, count)).round(3)
    us = (0.25 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    sw = np.clip(600 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1) + 1.3
    return ends, np.column_stack([fc, us, sw, ta, vpd, rh])


def _write(path, ends, values):
    lines = ["stamp," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}" for v in row)
              for e, row in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "kPa"}, "site": SITE} | options
    return read_table(path, **settings)


# ------------------------------------------ VPD written 0 at saturation under a 0 code
def test_vpd_zero_at_saturation_under_a_code_of_zero_is_refused_naming_both(tmp_path):
    """Before: missing = [-9999, 0] blanked every saturated record's VPD without a word
    (the invented grassland example's 362 zeros, 2.1 % of its VPD: annual NEE -241.67 ->
    -240.42, daytime Reco -2.8 g C m-2). VPD is 0 exactly where RH is 100 % (m)."""
    ends, values = _humid_records()
    zeros = values[:, 4] == 0
    assert np.array_equal(zeros, values[:, 5] == 100)       # VPD 0 <=> saturated (m)
    assert 0.01 < zeros.mean() < 0.05                        # below layouts31's 5 % gate
    path = _write(tmp_path / "v.csv", ends, values)
    with pytest.raises(ConfigError) as caught:
        _read(path, missing=[-9999, 0])
    message = str(caught.value)
    assert "column 'vpd' (vpd)" in message and "at the bound of its values" in message
    assert "vpd = [0]" in message and "[input.missing_by_variable]" in message
    # the reading "0 is a code of NEE only": VPD kept whole, as without the code
    kept, _ = _read(path, missing=[-9999], missing_by_variable={"nee": [0]})
    plain, _ = _read(path)
    assert np.array_equal(kept["vpd"].to_numpy(), plain["vpd"].to_numpy())
    assert int((plain["vpd"] == 0).sum()) == int(zeros.sum())
    # the reading "0 is no value in VPD too": the zeros blanked, as asked
    blanked, _ = _read(path, missing=[-9999, 0], missing_by_variable={"vpd": [0]})
    assert int(blanked["vpd"].isna().sum()) == int(zeros.sum())


def test_a_code_of_zero_at_random_records_of_vpd_stays_a_code():
    """An outage written 0 falls at any humidity: the records beside it lie as far from 0
    as the column does, so 0 is blanked as a code, as before."""
    ends, values = _humid_records()
    vpd = values[:, 4].copy()
    vpd[vpd == 0] = 0.0005                                  # no saturation in this one
    outage = np.random.default_rng(3).random(vpd.size) < 0.04
    vpd[outage] = 0.0
    assert ordinary_code_message("vpd", "vpd", 0.0, vpd) is None


def test_the_bound_rule_on_its_own():
    """The neighbour distance against the column's: a slow quantity reaching its bound is
    a reading (a sine's records beside its zero lie within one step of it), a code beyond
    a column far from it is not; fewer than 1 % of cells are not judged."""
    t = np.arange(4800)
    slow = np.clip(np.sin(t / 96 * 2 * math.pi) * 2.0, 0, None).round(3)   # kPa
    assert 0.3 < (slow == 0).mean() < 0.6
    near = 2.0 * math.sin(2 * math.pi / 96)                  # one record from the zero
    assert near < BOUND_NEAR * np.median(slow[slow > 0])
    assert "at the bound of its values" in ordinary_code_message("vpd", "v", 0.0, slow)
    far = np.where(t % 50 == 0, 0.0, 5.0 + np.sin(t / 7)).round(2)   # 2 % zeros, far
    assert ordinary_code_message("vpd", "v", 0.0, far) is None
    rare = slow.copy()
    rare[rare == 0] = 0.001
    rare[:40] = 0.0                                          # under 1 % and 48 cells
    assert ordinary_code_message("vpd", "v", 0.0, rare) is None


# ------------------------------------------------ Rg in calories per cm2 and minute
def _sunny_records(count=48 * 30):
    """Invented half-hourly records of June, Rg 0.7 of the potential radiation (clear
    days pass about 0.75 of it, common practice)."""
    from fluxpart.solar import potential_radiation
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = 0.7 * potential_radiation(ends - pd.Timedelta(minutes=30), SITE.latitude,
                                   SITE.longitude, SITE.utc_offset, interval_minutes=30)
    rng = np.random.default_rng(7)
    ta = (16 + 6 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    rh = np.clip(70 - 20 * np.sin((hour - 9) / 12 * np.pi), 20, 99).round(1)
    vpd = (_saturation_kpa(ta) * (1 - rh / 100)).round(4)
    fc = (3.0 - rg / 80 + rng.normal(0, 0.5, count)).round(3)
    us = (0.3 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd, rh])


def test_a_langley_per_minute_is_697_watts():
    """1 ly = 1 thermochemical cal cm-2 = 41,840 J m-2 (NIST SP 811, appendix B (m)), so
    1 ly min-1 = 697.33 W m-2; the solar constant, 1361 W m-2 (Kopp & Lean 2011 (m)),
    is the 1.95 ly min-1 of old actinometry (m)."""
    from fluxpart.variables import to_canonical
    assert float(to_canonical(np.array([1.0]), "rg", "cal cm-2 min-1")[0]) == pytest.approx(
        41840 / 60, rel=1e-12)
    assert float(to_canonical(np.array([1.0]), "rg", "ly min-1")[0]) == pytest.approx(697.33,
                                                                                       abs=0.01)
    assert 1361 / (41840 / 60) == pytest.approx(1.95, abs=0.01)


def test_rg_in_calories_is_named_and_read_declared(tmp_path):
    """Before: Rg of an old actinograph in cal cm-2 min-1 was refused as "MJ m-2" per
    interval, a fix that read it 20 % low (556 for 697 W m-2 a unit) and ran without a
    word (the invented grassland: nighttime GPP -2.8, daytime Reco -3.7 g C m-2); the
    unit was unknown. Known truth: the W m-2 the file was made from."""
    ends, values = _sunny_records()
    watts = values[:, 2].copy()
    values[:, 2] = (watts / (41840 / 60)).round(4)
    path = _write(tmp_path / "c.csv", ends, values)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(path, missing=[-9999])
    message = str(caught.value)
    assert "look like 'cal cm-2 min-1'" in message
    assert '"MJ m-2"' in message and '"kW m-2"' in message
    frame, _ = _read(path, missing=[-9999], units={"vpd": "kPa", "rg": "cal cm-2 min-1"})
    assert np.allclose(frame["rg"].to_numpy(), watts, atol=0.5 * 1e-4 * 41840 / 60 + 1e-9)


# ------------------------------------------ temperatures in tenths of a degree, integers
def test_tair_in_tenths_of_a_degree_is_named_and_read_declared(tmp_path):
    """Before: air temperature stored by the logger as integer tenths (153 for 15.3 °C)
    was refused as out of range with "check the column mapping", no unit to declare.
    Known truth: the °C the integers were made from."""
    ends, values = _sunny_records()
    celsius = values[:, 3].round(1)
    values[:, 3] = np.round(celsius * 10)
    path = _write(tmp_path / "t.csv", ends, values)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(path, missing=[-9999])
    message = str(caught.value)
    assert "column 't_air' (tair" in message and 'tair = "0.1 °C"' in message
    frame, _ = _read(path, missing=[-9999], units={"vpd": "kPa", "tair": "0.1 °C"})
    assert np.allclose(frame["tair"].to_numpy(), celsius, atol=1e-9)


def test_whole_numbers_that_read_as_fahrenheit_or_tenths_name_both():
    """A cool site's air temperature written as whole numbers (summer near 18 °C, 64 °F
    (NIST SP 811: °F = 1.8 °C + 32 (m)); 180 in tenths): both a whole-°F record and a
    logger's integer tenths give such numbers, far apart; the refusal names both."""
    from fluxpart.unit_checks import _tair_message
    days = 60
    t = np.arange(48 * days)
    celsius = 14 + 4 * np.sin(t / 48 * 2 * math.pi)
    fahrenheit = np.round(1.8 * celsius + 32)               # 50-65, plausible as °C
    message = _tair_message({"tair": fahrenheit}, {}, {"tair": "t_air"}, 30)
    assert 'tair = "°F"' in message and 'tair = "0.1 °C"' in message
    # with decimals the numbers are no integer tenths: °F alone, as before
    message = _tair_message({"tair": 1.8 * celsius + 32}, {}, {"tair": "t_air"}, 30)
    assert 'tair = "°F"' in message and "0.1 °C" not in message


# ------------------------------------------ a tab file whose header has blanks for tabs
def test_a_tab_header_with_blanks_for_tabs_is_read(tmp_path):
    """Before: a tab-delimited file whose header line an editor wrote with runs of blanks
    for its tabs was "line 2 has 7 fields where the header has 1 ... is a column name
    missing?"; layouts32 named the blanks, with the fixes; since layouts51 each of its 7
    names stands over one of the records' 7 fields, so it is read, noted. Known truth: the
    header's names and the data's fields as written; the "whitespace" setting reads the
    records as the tab header does (the tab character, U+0009, common practice)."""
    ends, values = _sunny_records(96)
    header = "    ".join(["stamp"] + NAMES)
    rows = [f"{e:%Y-%m-%dT%H:%M}\t" + "\t".join(f"{v:g}" for v in row)
            for e, row in zip(ends, values, strict=True)]
    path = tmp_path / "t.dat"
    path.write_text("\n".join([header] + rows) + "\n", encoding="utf-8")
    settings = {"time_format": "%Y-%m-%dT%H:%M", "missing": [-9999]}
    read, report = _read(path, delimiter="\t", **settings)
    assert any("written with blanks where the records use tabs" in n for n in report.notes)
    blank, _ = _read(path, delimiter="whitespace", **settings)
    pd.testing.assert_frame_equal(read, blank)
    tabbed = tmp_path / "u.dat"
    tabbed.write_text("\n".join([header.replace("    ", "\t")] + rows) + "\n",
                      encoding="utf-8")
    tab, _ = _read(tabbed, delimiter="\t", **settings)
    pd.testing.assert_frame_equal(blank, tab)


def test_hundredths_and_rh_tenths_are_named_and_read_to_the_bit(tmp_path):
    """Air temperature in integer hundredths and RH in integer tenths of a percent (a
    logger storing integers) are named with their unit and read as the decimal text
    would be: IEEE 754 division is correctly rounded, so 861 / 100 is the double nearest
    8.61, as float("8.61") is (Python's float, common practice). Known truth: the
    decimals the integers were made from."""
    ends, values = _sunny_records()
    celsius = values[:, 3].round(2)
    rh = values[:, 5].round(1)
    values[:, 3] = np.round(celsius * 100)
    values[:, 5] = np.round(rh * 10)
    path = _write(tmp_path / "h.csv", ends, values)
    with pytest.raises(ImplausibleValueError, match=r'tair = "0.01 °C"'):
        _read(path, missing=[-9999])
    with pytest.raises(ImplausibleValueError, match=r'rh = "0.1 %"'):
        _read(path, missing=[-9999], units={"vpd": "kPa", "tair": "0.01 °C"})
    frame, _ = _read(path, missing=[-9999],
                     units={"vpd": "kPa", "tair": "0.01 degC", "rh": "0.1 %"})
    assert [float(f"{c:.2f}") for c in celsius] == frame["tair"].tolist()
    assert [float(f"{r:.1f}") for r in rh] == frame["rh"].tolist()


def test_integer_tenths_that_fahrenheit_cannot_read_name_tenths_alone():
    """A frosty spell in integer tenths (-80 for -8.0 °C) read as °F would be -62 °C,
    below the plausible range (°C = (°F - 32) / 1.8, NIST SP 811 (m)): only tenths are
    named."""
    from fluxpart.unit_checks import _tair_message
    t = np.arange(48 * 60)
    tenths = np.round(10 * (5 + 13 * np.sin(t / 48 * 2 * math.pi)))
    assert (tenths.min() - 32) / 1.8 < -60
    message = _tair_message({"tair": tenths}, {}, {"tair": "t_air"}, 30)
    assert 'tair = "0.1 °C"' in message and '"°F"' not in message
