"""Round mistakes55: relative humidity written as a fraction for part of the record beside
a VPD column (`fluxpart.unit_checks`)."""
import numpy as np
import pandas as pd

from fluxpart.unit_checks import _without_rh_fraction_months, mixup_messages
from fluxpart.variables import saturation_vapour_pressure


def test_rh_as_a_fraction_from_april_names_rh_not_a_vpd_unit():
    """A year of records whose RH (60-90 %) turns into a fraction (0.6-0.9) from April
    (a new probe's output), the VPD column right (es (1 - RH / 100), fluxpart's own
    saturation vapour pressure, checked against the CRC Handbook in test_variables):
    the months of fractions give no basis for the VPD the humidity allows, so the VPD
    column is not refused (before: here a median 0.291 times the VPD computed from rh and
    tair, "the file is in inHg", a wrong fix; 0.288 on the grassland example with RH a
    fraction from July), and the rh column is
    named with those months. Common practice: RH in % at the surface stays above a few
    per cent (m)."""
    stamps = pd.date_range("2021-01-01", "2021-12-31 23:30", freq="30min")
    count = stamps.size
    day = np.arange(count) / 48.0
    tair = 10.0 - 10.0 * np.cos(2 * np.pi * day / 365) + 4.0 * np.sin(2 * np.pi * day)
    rh = 75.0 + 15.0 * np.cos(2 * np.pi * day)
    vpd = saturation_vapour_pressure(tair) * (1 - rh / 100)     # hPa, read from kPa
    written = np.where(stamps.month >= 4, rh / 100.0, rh)
    columns = {"vpd": "vpd_kpa", "tair": "air_temp_c", "rh": "rel_humidity"}
    refusals, warnings = mixup_messages({"vpd": vpd, "tair": tair, "rh": written},
                                        {"vpd": "kPa"}, columns, 30, stamps=stamps)
    assert "vpd" not in refusals, refusals
    assert not any("'vpd_kpa'" in w for w in warnings), warnings
    named = [w for w in warnings if "'rel_humidity'" in w and "fraction" in w]
    assert named and "2021-04" in named[0] and "2021-12" in named[0] and "2021-03" not in named[0]
    # the whole record as percent: nothing named
    clean_refusals, clean_warnings = mixup_messages({"vpd": vpd, "tair": tair, "rh": rh},
                                                    {"vpd": "kPa"}, columns, 30, stamps=stamps)
    assert not clean_refusals and not clean_warnings


def test_desert_summer_rh_in_percent_is_not_read_as_a_fraction():
    """A desert site (invented) whose summer RH runs 2-8 % at its driest (July under 15 %; afternoons of a hot desert
    reach a few per cent, common practice (m)), written in percent beside a right VPD
    column: no month is left out of the VPD the humidity allows, and nothing is named
    (review76: the months rule reads a fraction only where a month's RH never exceeds
    1.05)."""
    stamps = pd.date_range("2021-01-01", "2021-12-31 23:30", freq="30min")
    day = np.arange(stamps.size) / 48.0
    summer = np.clip(np.sin(np.pi * (day - 90) / 200), 0, 1)
    tair = 18 + 14 * summer + 8 * np.sin(2 * np.pi * (day - 0.375))
    dry = 2.0 + 6.0 * (0.5 - 0.5 * np.sin(2 * np.pi * (day - 0.375)))
    rh = (1 - summer) * (40 + 20 * np.cos(2 * np.pi * day)) + summer * dry
    assert rh[stamps.month == 7].max() < 15.0
    vpd = saturation_vapour_pressure(tair) * (1 - rh / 100)
    converted = {"vpd": vpd, "tair": tair, "rh": rh}
    kept = _without_rh_fraction_months(converted, {}, None, stamps)
    assert np.array_equal(kept["rh"], rh)
    columns = {"vpd": "vpd_kpa", "tair": "air_temp_c", "rh": "rel_humidity"}
    assert mixup_messages(converted, {"vpd": "kPa"}, columns, 30, stamps=stamps) == ({}, [])
