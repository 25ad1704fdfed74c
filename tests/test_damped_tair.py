"""An air temperature damped against the humidity's (round mistakes50).

The VPD of each invented record is computed in the test from the true air temperature
with the Magnus form of Alduchov & Eskridge (1996, eq. 21: e_s = 6.1094 exp(17.625 T /
(T + 243.04)) hPa) and VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)):
a humidity probe's VPD and RH imply its air temperature. A sonic's temperature lies
0.5-2 K above the air's (the virtual temperature, Kaimal & Gaynor 1991 (m)); its daily
course damped is our planted fault.
"""
import numpy as np
import pandas as pd

from fluxpart import damped_tair

DAYS, PER_DAY = 60, 48


def _air():
    """Invented records: a 10 K daily swing on weather changing over days, RH anti-phased."""
    rng = np.random.default_rng(50)
    hours = np.arange(DAYS * PER_DAY) / 2.0
    daily = 15.0 + 3.0 * np.sin(2 * np.pi * hours / (24.0 * 9.0))
    tair = daily + 5.0 * np.sin(2 * np.pi * (hours - 9.0) / 24.0)
    rh = np.clip(70.0 - 2.5 * (tair - daily) + rng.normal(0, 3, tair.size), 20, 100)
    es = 6.1094 * np.exp(17.625 * tair / (tair + 243.04))
    vpd = np.round(es * (1 - rh / 100.0), 2)       # hPa, two decimals as a logger writes
    return tair, rh, vpd


def _sonic(tair, damping):
    day = np.arange(tair.size) // PER_DAY
    mean = pd.Series(tair).groupby(day).transform("mean").to_numpy()
    return mean + damping * (tair - mean) + 2.0


def test_a_damped_temperature_is_named_and_the_probes_own_and_an_offset_are_not():
    tair, rh, vpd = _air()
    text = damped_tair.damped_tair(_sonic(tair, 2 / 3), rh, vpd, 30,
                                   {"tair": "t_sonic", "vpd": "vpd", "rh": "rh"})
    assert text is not None and "'t_sonic'" in text
    assert abs(float(text.split(" swings ")[1].split(" times")[0]) - 2 / 3) < 0.02
    ratio = damped_tair.damped_ratio(tair, rh, vpd, 30)[0]
    assert abs(ratio - 1.0) < 0.01                 # one air: the same daily course
    assert damped_tair.damped_tair(tair, rh, vpd, 30) is None
    assert damped_tair.damped_tair(tair + 2.0, rh, vpd, 30) is None   # an offset alone
    assert damped_tair.damped_tair(_sonic(tair, 0.95), rh, vpd, 30) is None
    # a sonic's temperature for the second month only: named by that month
    index = pd.date_range("2021-05-01", periods=tair.size, freq="30min")
    later = index.month == 6
    text = damped_tair.damped_tair(np.where(later, _sonic(tair, 0.6), tair), rh, vpd, 30,
                                   index=index)
    assert text is not None and "1 month(s): 2021-06" in text
    assert damped_tair.damped_tair(tair, rh, vpd, 30, index=index) is None
    # too short a record to judge
    assert damped_tair.damped_tair(_sonic(tair, 0.5)[:PER_DAY * 10], rh[:PER_DAY * 10],
                                   vpd[:PER_DAY * 10], 30) is None


def test_a_vpd_and_rh_of_two_hygrometers_or_a_vpd_over_ice_are_not_named():
    """VPD from a gas analyser's water vapour (and the air thermometer), RH from the
    humidity probe, their vapour pressures 3 % or 5 % apart (a few percent RH, within two
    hygrometers' specifications (m)): the implied temperature departs with RH's daily
    course, which read as a damped tair (ratio 0.84 and 0.75 on the grassland example,
    named before review64). A VPD a logger takes over ice below 0 degC (the Magnus form
    over ice of Alduchov & Eskridge 1996, eq. 23 (m): 6.1121 exp(22.587 T / (T + 273.86))
    hPa) beside an RH over water (the meteorological convention, WMO (m)). A damped
    tair is still named beside both."""
    tair, rh, vpd = _air()
    e = rh / 100.0 * 6.1094 * np.exp(17.625 * tair / (tair + 243.04))
    es = 6.1094 * np.exp(17.625 * tair / (tair + 243.04))
    for scale in (1.03, 1.05):
        analyser_vpd = np.round(es - scale * e, 2)
        ratio = damped_tair.damped_ratio(tair, rh, analyser_vpd, 30)[0]
        assert abs(ratio - 1.0) < 0.05, (scale, ratio)
        assert damped_tair.damped_tair(tair, rh, analyser_vpd, 30) is None
        assert damped_tair.damped_tair(_sonic(tair, 2 / 3), rh, analyser_vpd, 30) is not None
    cold = tair - 14.0                               # nights to -14, days to +6 degC
    es_cold = 6.1094 * np.exp(17.625 * cold / (cold + 243.04))
    es_ice = 6.1121 * np.exp(22.587 * cold / (cold + 273.86))
    ice_vpd = np.round(np.where(cold < 0, es_ice, es_cold) - rh / 100.0 * es_cold, 2)
    assert damped_tair.damped_tair(cold, rh, ice_vpd, 30) is None


def test_each_month_is_judged_on_its_own_records_in_the_order_first_met():
    """`damped_months` gathers a month's records by its number (round speed52): the same
    months, in the order of their first record, the same records in their own order and
    the same figures to the bit as a mask of the stamps' "YYYY-MM" labels, on stamps out
    of order (June first, split in two runs) and with a missing stamp (NaT, no month)."""
    tair, rh, vpd = _air()
    tair = np.where(np.arange(tair.size) >= tair.size // 2, _sonic(tair, 0.6), tair)
    index = pd.date_range("2021-05-01", periods=tair.size, freq="30min")
    order = np.r_[np.arange(1500, tair.size), np.arange(1500)]      # June first and split
    stamps = index[order].to_numpy().copy()
    stamps[7] = np.datetime64("NaT")
    stamps = pd.DatetimeIndex(stamps)
    args = tair[order], rh[order], vpd[order]
    months = damped_tair.damped_months(*args, stamps, 30)
    a_tair, a_implied, a_humidity, per_day = damped_tair._anomalies(*args, 30)
    labels = np.asarray(stamps.strftime("%Y-%m"), dtype=object)
    expected = {}
    for month in dict.fromkeys(label for label in labels if isinstance(label, str)):
        rows = labels == month
        figures = damped_tair._ratio(a_tair[rows], a_implied[rows], a_humidity[rows],
                                     damped_tair._MIN_MONTH_DAYS * per_day // 2)
        if np.isfinite(figures[0]):
            expected[month] = figures
    assert list(months) == list(expected) == ["2021-06", "2021-05"]
    assert months == expected
    assert months["2021-06"][0] < 0.7 < months["2021-05"][0]
