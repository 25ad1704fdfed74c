"""Tests of fluxpart.variables: canonical units, conversions, saturation vapour pressure."""

import numpy as np
import pytest
import scipy.constants
from conftest import load_reference

from fluxpart.errors import UnitError
from fluxpart.variables import (
    READER_VARIABLES,
    REQUIRED,
    VARIABLES,
    saturation_vapour_pressure,
    to_canonical,
    units_for,
    vpd_from_rh,
)

REFERENCE = load_reference("units")


def test_canonical_units_match_design():
    """Canonical units are those of DESIGN.md §3."""
    expected = {"nee": "µmol m-2 s-1", "rg": "W m-2", "tair": "°C", "vpd": "hPa",
                "ustar": "m s-1", "tsoil": "°C", "rh": "%", "nee_flag": "1"}
    assert {name: v.unit for name, v in VARIABLES.items()} == expected
    assert set(REQUIRED) == {"nee", "rg", "tair", "vpd", "ustar"}


def test_the_readme_variables_table_states_the_units_check_prints():
    """The README's table of canonical variables gives each the unit `check` prints
    (:data:`READER_VARIABLES`); ``nee_flag`` is a pure number, written "1" as the CF
    conventions write a dimensionless unit (CF conventions 1.11, section 3.1 (m)); the
    README said "–" (polish48)."""
    from pathlib import Path

    readme = (Path(__file__).parents[1] / "README.md").read_text(encoding="utf-8")
    table = readme.split("### Canonical variables and units", 1)[1].split("\n\n", 2)[1]
    rows = {}
    for line in table.splitlines()[2:]:
        cells = [cell.strip() for cell in line.strip("|").split("|")]
        rows[cells[0].strip("`")] = cells[2].split(" (", 1)[0]
    assert rows == {name: v.unit for name, v in READER_VARIABLES.items()}


def test_kelvin_to_celsius_offset():
    """K -> °C subtracts 273.15 (SI Brochure; scipy.constants.convert_temperature)."""
    offset = REFERENCE["temperature"]["kelvin_offset"]
    kelvin = np.array([233.15, 273.15, 300.0, 313.15])
    converted = to_canonical(kelvin, "tair", "K")
    np.testing.assert_allclose(converted, kelvin - offset, rtol=0, atol=1e-12)
    # scipy 1.x, scipy.constants.convert_temperature(val, "Kelvin", "Celsius")
    np.testing.assert_allclose(converted,
                               scipy.constants.convert_temperature(kelvin, "Kelvin", "Celsius"),
                               rtol=0, atol=1e-12)
    np.testing.assert_allclose(to_canonical(kelvin, "tsoil", "kelvin"), converted)


def test_pressure_prefixes():
    """kPa -> hPa x10 and Pa -> hPa x0.01 (SI prefixes; scipy.constants.kilo / hecto)."""
    values = np.array([0.0, 0.35, 1.2, 4.0])
    factor = REFERENCE["pressure"]["kpa_to_hpa"]
    assert factor == scipy.constants.kilo / scipy.constants.hecto
    np.testing.assert_allclose(to_canonical(values, "vpd", "kPa"), values * factor)
    np.testing.assert_allclose(to_canonical(values, "vpd", "Pa"),
                               values * REFERENCE["pressure"]["pa_to_hpa"])
    assert REFERENCE["pressure"]["pa_to_hpa"] == 1 / scipy.constants.hecto


def test_mg_co2_to_micromol():
    """1 mg CO2 m-2 s-1 = 1e-3/44.009 mol = 22.7226 µmol m-2 s-1 (IUPAC molar mass (m))."""
    molar = REFERENCE["molar_mass"]
    assert molar["carbon"] + 2 * molar["oxygen"] == pytest.approx(molar["co2"], abs=1e-9)
    converted = to_canonical([1.0, -0.5], "nee", "mg CO2 m-2 s-1")
    np.testing.assert_allclose(converted,
                               np.array([1.0, -0.5]) * REFERENCE["flux"]["mg_co2_in_umol"],
                               rtol=1e-5)
    np.testing.assert_allclose(converted, np.array([1.0, -0.5]) * 1e-3 / molar["co2"] * 1e6,
                               rtol=1e-12)


def test_fraction_to_percent():
    """RH as a fraction times 100 is percent (definition of per cent)."""
    np.testing.assert_allclose(to_canonical([0.0, 0.55, 1.0], "rh", "fraction"), [0, 55, 100])


def test_canonical_unit_is_identity_and_copies():
    """No unit means canonical: values come back equal, as a new array."""
    values = np.array([1.0, 2.0])
    out = to_canonical(values, "vpd")
    np.testing.assert_array_equal(out, values)
    out[0] = 99.0
    assert values[0] == 1.0


def test_unknown_unit_lists_accepted():
    """An unknown unit raises UnitError naming the setting and the accepted units."""
    with pytest.raises(UnitError, match=r'\[input.units\] vpd = "atm".*"hPa".*"kPa"'):
        to_canonical([1.0], "vpd", "atm")
    assert "K" in units_for("tair")


def test_saturation_vapour_pressure_against_handbook():
    """es(T) within 0.4 % of the CRC Handbook (IAPWS-95) table, e.g. 23.39 hPa at 20 °C (m)."""
    table = REFERENCE["saturation_vapour_pressure"]
    # tolerance: Alduchov & Eskridge (1996) state at most 0.384 % error over -40..50 °C (m)
    np.testing.assert_allclose(saturation_vapour_pressure(table["t_celsius"]), table["hpa"],
                               rtol=table["relative_tolerance"])
    assert saturation_vapour_pressure(20.0) == pytest.approx(23.39, rel=0.004)
    assert saturation_vapour_pressure(0.0) == pytest.approx(6.11, rel=0.004)


def test_saturation_vapour_pressure_below_freezing_against_wmo():
    """Over supercooled water, es agrees with the WMO Guide's Magnus form to 0.4 %.

    Source: WMO Guide to Instruments and Methods of Observation (WMO-No. 8), 2008
    edition, es = 6.112 exp(17.62 t / (243.12 + t)) hPa."""
    wmo = REFERENCE["saturation_vapour_pressure_wmo"]
    t = np.array(wmo["t_celsius"])
    expected = wmo["coefficient_hpa"] * np.exp(wmo["numerator"] * t
                                               / (wmo["denominator_celsius"] + t))
    np.testing.assert_allclose(saturation_vapour_pressure(t), expected,
                               rtol=wmo["relative_tolerance"])


def test_saturation_vapour_pressure_increasing():
    """es rises monotonically with temperature (Clausius–Clapeyron; common practice)."""
    es = saturation_vapour_pressure(np.linspace(-40, 50, 91))
    assert np.all(np.diff(es) > 0)


def test_vpd_from_rh():
    """VPD = es(T)(1 - RH/100): 50 % at 20 °C gives half of 23.393 hPa (CRC Handbook (m))."""
    vpd = vpd_from_rh([50.0, 100.0, 0.0, 104.0, np.nan], [20.0, 20.0, 20.0, 20.0, 20.0])
    assert vpd[0] == pytest.approx(23.393 / 2, rel=0.004)
    assert vpd[1] == 0.0
    assert vpd[2] == pytest.approx(23.393, rel=0.004)
    assert vpd[3] == 0.0  # supersaturation reading clipped to 100 %
    assert np.isnan(vpd[4])
