"""A VPD computed from RH with the soil temperature instead of the air's (round polish48)."""
import numpy as np
import pandas as pd
import pytest

from fluxpart.column_faults import sun_heated_tair
from fluxpart.preflight import _column_faults
from fluxpart.variables import saturation_temperature, saturation_vapour_pressure, vpd_from_rh
from fluxpart.vpd_soil import STAGE, vpd_from_soil_temperature

STEP = 30


def _sixty_days(seed=0):
    """An invented 60-day record: air at 15 ± 6 degC, RH falling in sunshine, Rg, and a
    soil at 5 cm whose daily wave is damped by exp(-z/d) and delayed by z/d radians,
    damping depth d = 0.1 m for the daily wave of a moist soil (Campbell & Norman 1998,
    ch. 8 (m)): amplitude 6 exp(-0.5) = 3.6 K, delay 0.5 rad = 1.9 h."""
    rng = np.random.default_rng(seed)
    hours = np.arange(60 * 1440 // STEP) * STEP / 60.0
    sun = np.clip(np.sin(2 * np.pi * (hours % 24 - 6) / 24), 0, None)
    rg = 850.0 * sun * rng.uniform(0.4, 1.0, hours.size)
    phase = 2 * np.pi * (hours % 24 - 9) / 24
    air = 15.0 + 6.0 * np.sin(phase) + rng.normal(0, 0.3, hours.size)
    soil = 15.5 + 6.0 * np.exp(-0.5) * np.sin(phase - 0.5) + rng.normal(0, 0.05, hours.size)
    rh = np.clip(75.0 - 25.0 * sun + rng.normal(0, 3, hours.size), 5, 100)
    index = pd.date_range("2021-06-01", periods=hours.size, freq=f"{STEP}min")
    return index, air, soil, rh, rg


def test_the_implied_temperature_inverts_the_magnus_form():
    """saturation_temperature is the inverse of e_s (Alduchov & Eskridge 1996, eq. 21):
    e_s(0 degC) = 6.1094 hPa exactly; over water at 20 degC the handbook tables give
    23.39 hPa (WMO-No. 8, Annex 4.B (m)), which the Magnus form's stated accuracy (0.4 %,
    about 0.06 K there) returns within 0.1 K."""
    assert saturation_temperature(6.1094) == pytest.approx(0.0, abs=1e-12)
    assert saturation_temperature(23.39) == pytest.approx(20.0, abs=0.1)
    temperatures = np.linspace(-40.0, 50.0, 19)
    np.testing.assert_allclose(
        saturation_temperature(saturation_vapour_pressure(temperatures)), temperatures,
        atol=1e-9)


def test_a_vpd_computed_with_the_soil_temperature_is_named_by_its_cause():
    """Known-truth recovery: VPD = e_s(T) (1 - RH / 100) at the air's T (Campbell & Norman
    1998, ch. 3 (m)) is quiet; the same VPD computed with the soil's T, as written and
    rounded to 0.1 hPa, is named; the sun-heated check (which named it as a heated air
    thermometer, round mistakes42) now names both causes, and the preflight gives the
    soil finding alone where tsoil is mapped."""
    index, air, soil, rh, rg = _sixty_days()
    honest = vpd_from_rh(rh, air)
    of_soil = vpd_from_rh(rh, soil)
    assert vpd_from_soil_temperature(air, rh, honest, soil) is None
    for vpd in (of_soil, np.round(of_soil, 1)):
        text = vpd_from_soil_temperature(air, rh, vpd, soil,
                                         {"vpd": "VPD_x", "tsoil": "TS5", "tair": "TA1"})
        assert text is not None and "(column 'VPD_x') was computed with the soil" in text
        assert "'TS5'" in text and "'TA1'" in text
    # one sensor mapped twice (air = soil) cannot tell: quiet here, named by another check
    assert vpd_from_soil_temperature(air, rh, honest, air + 0.2) is None
    # a soil not mapped (another depth): only the sun-heated check speaks, naming both
    deeper = 15.5 + 6.0 * np.exp(-1.5) * np.sin(2 * np.pi * ((index.hour + index.minute / 60)
                                                            .to_numpy() - 9) / 24 - 1.5)
    from_deeper = vpd_from_rh(rh, deeper)
    assert vpd_from_soil_temperature(air, rh, from_deeper, soil) is None
    text = sun_heated_tair(air, rh, from_deeper, rg, None, index)
    assert text is not None and "a thermometer heated by the sun" in text
    assert "VPD computed from RH with a temperature cooler than the air by day" in text
    # too few records to judge
    assert vpd_from_soil_temperature(air[:150], rh[:150], of_soil[:150], soil[:150]) is None
    # through the preflight: the cause, not the heated thermometer
    frame = pd.DataFrame({"tair": air, "rh": rh, "vpd": of_soil, "rg": rg, "tsoil": soil},
                         index=index)
    stages = [f.stage for f in _column_faults(frame, None, STEP)]
    assert STAGE in stages and "input (tair sunlit)" not in stages
    frame["vpd"] = honest
    stages = [f.stage for f in _column_faults(frame, None, STEP)]
    assert STAGE not in stages and "input (tair sunlit)" not in stages
