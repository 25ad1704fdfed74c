"""VPD reading 0 in sunshine month after month (round mistakes42)."""
import numpy as np
import pandas as pd
import pytest

from fluxpart import solar
from fluxpart.preflight import _column_faults
from fluxpart.variables import saturation_vapour_pressure
from fluxpart.vpd_zero import STAGE, WARM_TAIR, ZERO_VPD, vpd_zero_in_sunshine


def _humid_summer(days=61, relative_humidity=95.0):
    """Two invented summer months at 49.3 deg N: clear-sky Rg (0.75 of the potential
    radiation, a broadband transmissivity, common practice (m)), air at 12-28 degC and a
    humid air of 95 % RH all day, wetter than sunlit air keeps (the deficit of the rule's
    sources is several hPa at midday; Monteith & Unsworth 2013 (m))."""
    index = pd.date_range("2021-06-01", periods=days * 48, freq="30min")
    potential = solar.potential_radiation(index, 49.3, 10.2, 1.0, 30)
    hours = (index.hour + index.minute / 60).to_numpy()
    tair = 20.0 + 8.0 * np.sin(2 * np.pi * (hours - 9.0) / 24.0)
    vpd = saturation_vapour_pressure(tair) * (1.0 - relative_humidity / 100.0)
    return index, 0.75 * potential, tair, vpd, potential


def test_the_rule_reads_saturation_within_one_percent_of_relative_humidity():
    """The bound is saturation to a humidity sensor: the saturation vapour pressure over
    water at 10 degC is 12.27 hPa (WMO-No. 8, Annex 4.B, Magnus form (m)), so VPD of
    0.1 hPa there is a relative humidity above 99 %."""
    assert float(saturation_vapour_pressure(np.array([10.0]))[0]) == pytest.approx(12.27, abs=0.03)
    assert WARM_TAIR == 10.0
    assert ZERO_VPD / 12.27 < 0.01


def test_humid_sunshine_is_quiet_and_a_rain_gauge_or_a_lost_sensor_is_named():
    """Known-truth recovery on invented months: 95 % RH all day, and 40 % of the sunlit
    records saturated (fog or showers), are not named; a rain gauge's column (0 in 93 % of
    the records) and VPD written 0 for the second month are named with their months,
    also through the preflight's column checks."""
    index, rg, tair, vpd, potential = _humid_summer()
    assert vpd_zero_in_sunshine(vpd, rg, tair, index) is None
    rng = np.random.default_rng(3)
    foggy = np.where(rng.random(vpd.size) < 0.4, 0.0, vpd)
    assert vpd_zero_in_sunshine(foggy, rg, tair, index) is None
    rain = np.where(rng.random(vpd.size) < 0.07, np.round(rng.exponential(6.0, vpd.size)), 0.0)
    text = vpd_zero_in_sunshine(rain, rg, tair, index, {"vpd": "rain_mm"})
    assert text is not None and "'rain_mm'" in text and "2021-06" in text and "2021-07" in text
    lost = np.where(index >= "2021-07-01", 0.0, vpd)
    text = vpd_zero_in_sunshine(lost, rg, tair, index)
    assert "1 month(s): 2021-07 (100 %)" in text
    screened = pd.DataFrame({"vpd": lost, "rg": rg, "tair": tair}, index=index)
    stages = [finding.stage for finding in _column_faults(screened, potential, 30)]
    assert STAGE in stages
    # cold air under the sun (a snow cover near saturation) is not judged
    assert vpd_zero_in_sunshine(lost, rg, tair - 25.0, index) is None
