"""NEE beside the weather of another record (round mistakes45)."""
import numpy as np
import pandas as pd

from fluxpart.weather_pairing import (
    RESPONSE_SHARE,
    cloud_response,
    weather_of_another_record,
)

#: Quantum efficiency [µmol CO2 per J] and light-saturated uptake [µmol m-2 s-1] of a
#: grassland's rectangular hyperbola of global radiation, GPP = a Rg P / (a Rg + P): a of
#: about 0.02 mol CO2 per mol photons times 2.1 µmol photons per J of Rg (McCree 1972 (m))
#: and P 25 (the light-response parameters of Lasslop et al. 2010 (m), a temperate
#: grassland's range).
_EFFICIENCY = 0.02 * 2.1
_SATURATED = 25.0


def _weather(seed, days=92):
    """Invented half-hourly summer weather of a site at 49 deg N: the clear-sky Rg of the
    sun's elevation, times a clearness that drifts by day and flickers by record; an air
    temperature and VPD that follow the light."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-06-01", periods=days * 48, freq="30min")
    hours = index.hour.to_numpy() + index.minute.to_numpy() / 60 + 0.25
    declination = np.radians(23.44) * np.cos(2 * np.pi * (index.day_of_year.to_numpy() - 172) / 365)
    latitude = np.radians(49.0)
    elevation = (np.sin(latitude) * np.sin(declination) + np.cos(latitude)
                 * np.cos(declination) * np.cos(np.radians(15 * (hours - 12))))
    day_clearness = np.repeat(rng.uniform(0.25, 1.0, days), 48)
    flicker = np.clip(day_clearness + rng.normal(0, 0.15, index.size), 0.1, 1.0)
    rg = np.round(np.clip(1000 * np.asarray(elevation), 0, None) * flicker, 1)
    tair = 16 + 0.008 * rg + rng.normal(0, 0.5, index.size)
    vpd = np.clip(4 + 0.012 * rg + rng.normal(0, 0.5, index.size), 0, None)
    return index, rg, tair, vpd


def _nee(rg, tair, seed):
    """NEE of the hyperbola and a Q10-of-2 respiration at 10 degC of 3 µmol m-2 s-1 (the
    doubling per 10 K of common practice), with a random error of 10 % plus 0.5."""
    rng = np.random.default_rng(seed)
    gpp = _EFFICIENCY * rg * _SATURATED / (_EFFICIENCY * rg + _SATURATED)
    reco = 3.0 * 2.0 ** ((tair - 10) / 10)
    truth = reco - gpp
    return truth + rng.normal(0, 1, rg.size) * (0.5 + 0.1 * np.abs(truth))


def test_nee_of_another_weather_is_named_and_its_own_is_not():
    """Known truth: NEE made by a light response of its own Rg (Lasslop et al. 2010 (m))
    answers its clouds (q above the call's share, no call); the same site's NEE beside
    another draw of the weather (another year's columns joined) answers none: named,
    with the columns."""
    index, rg, tair, vpd = _weather(1)
    nee = _nee(rg, tair, 2)
    own, _ = cloud_response(nee, rg, index)
    assert own > RESPONSE_SHARE + 0.2
    assert weather_of_another_record(nee, rg, index, vpd, tair) is None
    _, other_rg, other_tair, other_vpd = _weather(3)
    text = weather_of_another_record(nee, other_rg, index, other_vpd, other_tair,
                                     {"nee": "co2_exchange", "rg": "solar_down"})
    assert text is not None
    assert "'co2_exchange'" in text and "'solar_down'" in text and "another year" in text
    # an empty VPD column leaves the free fit to Rg and tair: still judged
    assert weather_of_another_record(nee, other_rg, index, np.full_like(rg, np.nan),
                                     other_tair) is not None
    # a VPD with scattered gaps (40 % at random) left no month complete under every
    # shift and silenced the check; Rg alone still judges (review56)
    scattered = other_vpd.copy()
    scattered[np.random.default_rng(4).random(rg.size) < 0.4] = np.nan
    assert weather_of_another_record(nee, other_rg, index, scattered, other_tair) is not None
    assert weather_of_another_record(nee, rg, index, np.where(np.isnan(scattered), np.nan,
                                                               vpd), tair) is None
    # a polar night (no daytime record) and a record without uptake are not judged
    assert weather_of_another_record(nee, np.zeros_like(rg), index) is None
    assert weather_of_another_record(np.abs(nee), rg, index, vpd, tair) is None


def test_one_year_of_another_weather_in_a_longer_record_is_named_by_its_year():
    """Known truth: two summers of NEE from the same light response (Lasslop et al. 2010
    (m)), the second year's weather columns another draw's (a yearly file joined from the
    wrong year). The whole record's answer is carried by the first year; judged alone, the
    second answers none of its weather while the first answers beyond doubt: named with
    its year. The honest record stays quiet."""
    index, rg, tair, vpd = _weather(1, days=457)           # 2021-06-01 to 2022-08-31
    nee = _nee(rg, tair, 2)
    assert weather_of_another_record(nee, rg, index, vpd, tair) is None
    _, other_rg, other_tair, other_vpd = _weather(3, days=457)
    later = index.year == 2022
    joined = [np.where(later, other, own) for other, own in
              ((other_rg, rg), (other_vpd, vpd), (other_tair, tair))]
    whole, _ = cloud_response(nee, joined[0], index)
    assert whole > RESPONSE_SHARE - 0.1                    # the whole record still answers
    text = weather_of_another_record(nee, *joined[:1], index, *joined[1:],
                                     {"nee": "co2_exchange"})
    assert text is not None and "clouds in 2022 (each year judged alone" in text
