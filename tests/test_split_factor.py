"""The factor of a unit changed within the record, measured at the jump (round mistakes41).

Unit factors: CO2 44.009 and C 12.011 g mol-1 (IUPAC standard atomic weights (m)), so mg
CO2 m-2 s-1 is 1000 / 44.009 = 22.72 µmol m-2 s-1 and g C m-2 per 30-min record is
1e6 / 12.011 / 1800 = 46.25 µmol m-2 s-1.
"""
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.io import _unit_factors
from fluxpart.split_factor import (
    UNIT_FIT,
    change_point,
    hour_matched_factor,
    jump_factor,
    stepped_months,
    unit_of_factor,
)


def _flux(days=120, seed=0):
    """A half-hourly flux of a steady mid-season [µmol m-2 s-1]: a daytime uptake of
    20 and a night release of 4, with random error 1 (invented, known truth)."""
    starts = pd.date_range("2021-06-01", periods=days * 48, freq="30min")
    hour = np.asarray(starts.hour + starts.minute / 60.0)
    day = np.clip(np.sin((hour - 6.0) / 12.0 * np.pi), 0.0, None)
    noise = np.random.default_rng(seed).normal(0.0, 1.0, starts.size)
    return starts, 4.0 - 24.0 * day + noise


def test_unit_factors_are_the_molar_masses():
    factors = _unit_factors("nee", None, 30)
    assert factors["mg CO2 m-2 s-1"] == pytest.approx(1000.0 / 44.009, rel=1e-4)
    assert factors["g C m-2"] == pytest.approx(1e6 / 12.011 / 1800.0, rel=1e-4)
    assert "umol m-2 s-1" not in factors and "µmol m-2 s-1" not in factors


@pytest.mark.parametrize("unit", ["mg CO2 m-2 s-1", "g C m-2"])
def test_jump_names_the_unit_of_its_factor(unit):
    starts, flux = _flux()
    factors = _unit_factors("nee", None, 30)
    change = int(np.flatnonzero(starts == pd.Timestamp("2021-07-17"))[0])
    written = flux.copy()
    written[change:] /= factors[unit]
    # the reader's split lies at the next month start, the change a fortnight before it
    cut = int(np.flatnonzero(starts == pd.Timestamp("2021-08-01"))[0])
    factor, at = jump_factor(written, starts, cut)
    assert factor == pytest.approx(factors[unit], rel=0.25)
    assert abs((at - pd.Timestamp("2021-07-17")).days) <= 2
    assert unit_of_factor(factor, factors) == unit


def test_a_factor_between_the_units_names_neither():
    factors = _unit_factors("nee", None, 30)
    assert unit_of_factor(32.4, factors) is None      # the geometric midpoint
    assert unit_of_factor(float("nan"), factors) is None


def test_the_jump_is_measured_at_the_change_not_at_the_first_split(tmp_path):
    """VPD of the invented grassland example written in hPa from July under a kPa
    declaration (10 times: 1 kPa = 10 hPa, SI): several month starts split the record
    into parts that pass, and the jump had been measured at the first of them (1 May
    here; early March on the full year, a factor 0.7 that fits no unit) rather than at
    the change (round mistakes50)."""
    from fluxpart.errors import FluxpartError
    from fluxpart.io import read_config

    example = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"
    config = tmp_path / example.name
    config.write_text(example.read_text())
    data = tmp_path / "quillmoor_grassland.csv"
    frame = pd.read_csv(example.with_suffix(".csv"), dtype={"stamp_end": str})
    month = frame["stamp_end"].str[4:6].astype(int)
    frame = frame[(month >= 2) & (month <= 9)].reset_index(drop=True)   # February-September
    later = frame["stamp_end"].str[4:6].astype(int) >= 7
    vpd = frame["vpd_kpa"].to_numpy()
    frame["vpd_kpa"] = np.where(later & (vpd != -9999), np.round(vpd * 10, 3), vpd)
    frame.to_csv(data, index=False)
    with pytest.raises(FluxpartError) as raised:
        read_config(config)
    text = str(raised.value)
    at = re.search(r"from (\d{4}-\d{2}-\d{2}) on", text)
    assert at is not None, text
    # the first July record ends at 00:30 on 1 July; the stamps mark ends, so the
    # records from 30 June 23:30 are in hPa
    assert abs((pd.Timestamp(at.group(1)) - pd.Timestamp("2021-07-01")).days) <= 1, text


def test_soil_water_as_tsoil_is_named_not_a_unit_changed_within(tmp_path):
    """Soil water content in % (invented: 30 ± 8, wet in winter, dry in summer, a slow
    random walk, no daily course) mapped as tsoil in the invented grassland example. It
    was refused as "a unit that changed within the record", °F before May and °C after
    (a split search over parts that each pass). A soil temperature in any unit (an
    increasing linear function of °C) keeps its daily course at 5 cm and follows the
    air's seasons (Hillel 1998 (m)); the refusal now names a water content instead, and
    the example's own soil temperature in °F is still named °F (mistakes50)."""
    from fluxpart.errors import FluxpartError
    from fluxpart.io import read_config

    example = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"
    config = tmp_path / example.name
    data = tmp_path / "quillmoor_grassland.csv"
    frame = pd.read_csv(example.with_suffix(".csv"), dtype={"stamp_end": str})
    day = pd.to_datetime(frame["stamp_end"], format="%Y%m%d%H%M").dt.day_of_year.to_numpy()
    theta = 30.0 + 8.0 * np.cos(2 * np.pi * (day - 30) / 365.0)
    theta += np.cumsum(np.random.default_rng(9).normal(0.0, 0.02, len(day)))
    soil = frame["soil_temp_5cm"].to_numpy()
    for column, named, absent in (
            (np.round(theta, 2), "soil water content in percent", "changed within"),
            (np.where(soil == -9999, soil, np.round(soil * 1.8 + 32.0, 2)), '"°F"',
             "water content")):
        config.write_text(example.read_text())
        frame.assign(soil_temp_5cm=column).to_csv(data, index=False)
        with pytest.raises(FluxpartError) as raised:
            read_config(config)
        text = str(raised.value)
        assert "soil_temp_5cm" in text and named in text and absent not in text, text


def _seasonal_flux(seed=0):
    """A half-hourly year whose flux grows out of a dormant winter [µmol m-2 s-1]: a
    night release and a daytime uptake scaled by a canopy 0.02 in winter, 1 in July, with
    a random error of 0.1 + 0.1 |flux| (Richardson et al. 2006's form (m); invented data,
    known truth)."""
    starts = pd.date_range("2022-01-01", periods=365 * 48, freq="30min")
    hour = np.asarray(starts.hour + starts.minute / 60.0)
    day = np.clip(np.sin((hour - 6.0) / 12.0 * np.pi), 0.0, None)
    canopy = 0.02 + 0.98 * np.exp(-0.5 * ((np.asarray(starts.day_of_year) - 196) / 45.0) ** 2)
    flux = canopy * (3.0 - 20.0 * day) + 0.3
    rng = np.random.default_rng(seed)
    return starts, flux + rng.laplace(0.0, (0.1 + 0.1 * np.abs(flux)) / np.sqrt(2.0))


def test_dormant_months_are_no_unit_but_a_unit_steps():
    """Winter months small by nature join the months beside them without a step of 22.7
    (mg CO2 m-2 s-1 against µmol m-2 s-1): not named; the same months written in mg CO2
    step by 22.7 at their end and are kept, as is a summer month in mg CO2 (steps at
    both ends)."""
    starts, flux = _seasonal_flux()
    factor = 1000.0 / 44.009
    winter = ["2022-01", "2022-02", "2022-12"]
    assert stepped_months(flux, starts, winter, factor) == []
    written = flux.copy()
    early = np.asarray(starts < pd.Timestamp("2022-03-01"))
    written[early] /= factor
    assert stepped_months(written, starts, winter, factor) == ["2022-01", "2022-02"]
    written = flux.copy()
    august = np.asarray(starts.strftime("%Y-%m") == "2022-08")
    written[august] /= factor
    assert stepped_months(written, starts, ["2022-08", "2022-12"], factor) == ["2022-08"]
    assert stepped_months(written, starts, [], factor) == []


def _refusal_with(tmp_path, column: str, date: str, edit) -> str:
    """The refusal of the invented grassland example with `column` written as `edit`
    makes it from `date` on."""
    from fluxpart.errors import FluxpartError
    from fluxpart.io import read_config

    example = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"
    config = tmp_path / example.name
    config.write_text(example.read_text())
    frame = pd.read_csv(example.with_suffix(".csv"), dtype={"stamp_end": str})
    later = (pd.to_datetime(frame["stamp_end"], format="%Y%m%d%H%M")
             > pd.Timestamp(date)).to_numpy()
    values = frame[column].to_numpy()
    frame[column] = np.where(later & (values != -9999), edit(values), values)
    frame.to_csv(tmp_path / "quillmoor_grassland.csv", index=False)
    with pytest.raises(FluxpartError) as raised:
        read_config(config)
    return str(raised.value)


@pytest.mark.parametrize("date", ["2021-05-12", "2021-07-09"])
def test_a_change_mid_month_is_dated_and_its_unit_named(tmp_path, date):
    """VPD in hPa from a day that is no month's first (round mistakes58's case): the
    refusal had stated a factor 0.0455 from 1 May (two fortnights' 99th percentiles, the
    later holding three changed days), which fit no unit; now the day of the change and
    the factor of hPa against kPa, 0.1 (1 kPa = 10 hPa, SI)."""
    text = _refusal_with(tmp_path, "vpd_kpa", date, lambda kpa: np.round(kpa * 10, 3))
    found = re.search(r"jump by a factor ([0-9.e+-]+) from (\d{4}-\d{2}-\d{2}) on", text)
    assert found is not None, text
    assert found.group(2) == date, text
    assert float(found.group(1)) == pytest.approx(0.1, rel=UNIT_FIT - 1.0), text
    assert "fits 'hPa'" in text, text


def test_a_unit_with_an_offset_is_dated_without_a_factor(tmp_path):
    """tair in °F from 20 September (°F = 1.8 °C + 32, NIST SP 811 (m)): the refusal
    had stated "a factor 0.334 ... fits no unit", with negative factors for K and °F; a
    unit with an offset is no factor on the values, so the day alone is stated."""
    text = _refusal_with(tmp_path, "air_temp_c", "2021-09-20",
                         lambda celsius: np.round(celsius * 1.8 + 32.0, 2))
    assert "values change from 2021-09-20 on" in text, text
    assert "factor" not in text.split("values change from")[1].split(")")[0], text
    assert "jump by a factor" not in text, text


@pytest.mark.parametrize("unit", ["mg CO2 m-2 s-1", "g C m-2"])
@pytest.mark.parametrize("date", ["2022-04-23", "2022-05-12", "2022-09-27"])
def test_change_point_finds_the_day_through_the_season(unit, date):
    """A flux growing out of winter and back (invented, known truth) written in another
    unit from a day in green-up or senescence: every day boundary of two months is
    tried, the day of the change is found to the day, and the factor, from the same
    hours either side, names the unit (molar masses: IUPAC standard atomic weights (m))."""
    starts, flux = _seasonal_flux()
    factors = _unit_factors("nee", None, 30)
    written = flux.copy()
    later = np.asarray(starts >= pd.Timestamp(date))
    written[later] /= factors[unit]
    found = change_point(written, starts, pd.Timestamp(date) - pd.Timedelta(days=31),
                         pd.Timestamp(date) + pd.Timedelta(days=31))
    assert found is not None
    factor, at = found
    assert at == pd.Timestamp(date)
    assert unit_of_factor(factor, factors) == unit


def test_hour_matched_factor_is_the_units_own_on_a_steady_course():
    """A steady day's course written ten times larger from a day on (hPa for kPa: 1 kPa
    = 10 hPa, SI): every hour's percentile steps by exactly 10."""
    starts = pd.date_range("2021-05-01", periods=60 * 48, freq="30min")
    hour = np.asarray(starts.hour + starts.minute / 60.0)
    course = 0.2 + np.clip(np.sin((hour - 6.0) / 12.0 * np.pi), 0.0, None)
    at = pd.Timestamp("2021-06-05")
    written = np.where(np.asarray(starts >= at), course * 10.0, course)
    assert hour_matched_factor(written, starts, at) == pytest.approx(0.1, rel=1e-9)
    assert change_point(written, starts, at - pd.Timedelta(days=20),
                        at + pd.Timedelta(days=20))[1] == at
    assert hour_matched_factor(written[:48], starts[:48], at) is None
