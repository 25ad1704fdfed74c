"""The VPD column exchanged with another column for some months (round layouts28).

Outside facts: VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)), with
e_s by Tetens' formula, 0.6108 exp(17.27 T / (T + 237.3)) kPa (Tetens 1930, as FAO-56
eq. 11 writes it (m)), computed here independently of fluxpart's own. The records are
invented known truth: which columns were exchanged, and from when.
"""

import numpy as np
import pandas as pd

from fluxpart.vpd_exchange import vpd_exchanged_in_months


def _year(seed=3):
    """Invented half-hourly weather of a year: T and RH with diurnal and synoptic
    courses, VPD from them by Tetens (hPa), u* and a soil temperature."""
    rng = np.random.default_rng(seed)
    stamps = pd.date_range("2021-01-01", periods=17520, freq="30min")
    day = stamps.day_of_year.to_numpy() + stamps.hour.to_numpy() / 24
    hour = stamps.hour.to_numpy() + stamps.minute.to_numpy() / 60
    weather = np.convolve(rng.normal(0, 1, day.size), np.ones(96) / 10, "same")
    tair = 10 - 10 * np.cos(2 * np.pi * (day - 15) / 365) + 5 * np.sin(
        (hour - 9) / 12 * np.pi) + weather
    rh = np.clip(75 - 20 * np.sin((hour - 9) / 12 * np.pi) + 3 * weather
                 + rng.normal(0, 2, day.size), 5, 100)
    es = 6.108 * np.exp(17.27 * tair / (tair + 237.3))          # hPa, Tetens
    vpd = es * (1 - rh / 100)
    ustar = np.clip(0.25 + 0.05 * np.sin((hour - 8) / 12 * np.pi) + rng.gamma(2, 0.05, day.size)
                    - 0.1, 0.02, None)
    tsoil = 10 - 8 * np.cos(2 * np.pi * (day - 35) / 365) + 1.0 * np.sin((hour - 13) / 12 * np.pi)
    return stamps, tair, rh, vpd, {"ustar": ustar, "tsoil": tsoil}


def test_vpd_and_ustar_exchanged_from_july_are_named():
    """Known truth: the two columns exchanged from 1 July; the message names u*'s column
    and the six months."""
    stamps, tair, rh, vpd, others = _year()
    later = stamps >= "2021-07-01"
    written_vpd, written_ustar = vpd.copy(), others["ustar"].copy()
    written_vpd[later] = others["ustar"][later]
    written_ustar[later] = vpd[later] / 10                       # the file's kPa
    text = vpd_exchanged_in_months(tair, rh, written_vpd,
                                   {"ustar": written_ustar, "tsoil": others["tsoil"]},
                                   stamps, {"vpd": "VPD", "ustar": "u_fric"})
    assert text is not None
    assert "6 month(s) (2021-07 to 2021-12)" in text and "'u_fric' (ustar)" in text


def test_vpd_and_soil_temperature_exchanged_for_a_month_are_named():
    stamps, tair, rh, vpd, others = _year(5)
    month = (stamps >= "2021-03-01") & (stamps < "2021-04-01")
    written_vpd, written_tsoil = vpd.copy(), others["tsoil"].copy()
    written_vpd[month], written_tsoil[month] = others["tsoil"][month], vpd[month]
    text = vpd_exchanged_in_months(tair, rh, written_vpd,
                                   {"ustar": others["ustar"], "tsoil": written_tsoil}, stamps)
    assert text is not None and "1 month(s) (2021-03)" in text and "(tsoil)" in text


def test_columns_as_written_are_not_named():
    """Kept quiet: every column as measured, also a VPD of another probe (its own
    noise of 3 % and an offset), and a VPD that never follows RH and T (left to the
    other checks: no month out of step with the rest)."""
    stamps, tair, rh, vpd, others = _year(7)
    assert vpd_exchanged_in_months(tair, rh, vpd, others, stamps) is None
    rng = np.random.default_rng(7)
    other_probe = vpd * rng.normal(1.0, 0.03, vpd.size) + 0.2
    assert vpd_exchanged_in_months(tair, rh, other_probe, others, stamps) is None
    unrelated = rng.gamma(2.0, 3.0, vpd.size)
    assert vpd_exchanged_in_months(tair, rh, unrelated, others, stamps) is None


def test_months_too_short_to_judge_name_nothing():
    """Fewer than ten days of records in a month judge nothing (known truth: the
    exchange lies in a week only)."""
    stamps, tair, rh, vpd, others = _year(9)
    week = (stamps >= "2021-08-01") & (stamps < "2021-08-08")
    written = vpd.copy()
    written[week] = others["ustar"][week]
    present = np.where((stamps.month == 8) & ~week, np.nan, 1.0)   # only the week in August
    assert vpd_exchanged_in_months(tair * present, rh, written, others, stamps) is None


def test_months_apart_are_not_shown_as_one_run():
    """Known truth: VPD and u* exchanged in March and in September only (a logger program
    changed twice and changed back); the message names the two months, not the run from
    March to September, whose five months between were written right (review36: shown
    as "2021-03 .. 2021-09" before). Months written as ISO 8601 YYYY-MM (m)."""
    stamps, tair, rh, vpd, others = _year(11)
    months = (stamps.month == 3) | (stamps.month == 9)
    written_vpd, written_ustar = vpd.copy(), others["ustar"].copy()
    written_vpd[months] = others["ustar"][months]
    written_ustar[months] = vpd[months] / 10
    text = vpd_exchanged_in_months(tair, rh, written_vpd,
                                   {"ustar": written_ustar, "tsoil": others["tsoil"]}, stamps)
    assert text is not None
    assert "2 month(s) (2021-03, 2021-09)" in text
    assert ".." not in text and "2021-03 to 2021-09" not in text


def test_the_mapping_exchanged_for_the_whole_record_is_named():
    """Round mistakes54, known truth: ``vpd`` and ``ustar`` each mapped to the other's
    column for the whole record (VPD = e_s(T) (1 - RH / 100), Campbell & Norman 1998 (m));
    the months-apart check names nothing (VPD follows in no month), this one names both
    columns and the mapping to write. The columns as measured, and an unrelated VPD
    column beside a u* that follows nothing, are not named."""
    from fluxpart.vpd_exchange import vpd_mapped_to_another
    stamps, tair, rh, vpd, others = _year(11)
    written = {"ustar": vpd / 10, "tsoil": others["tsoil"]}        # the file's kPa as u*
    names = {"vpd": "u_fric", "ustar": "VPD"}
    assert vpd_exchanged_in_months(tair, rh, others["ustar"], written, stamps, names) is None
    text = vpd_mapped_to_another(tair, rh, others["ustar"], written, stamps, names)
    assert text is not None
    assert "vpd = 'u_fric' and ustar = 'VPD' look exchanged" in text
    assert "in 12 of 12 months" in text and "map vpd = 'VPD' and ustar = 'u_fric'" in text
    assert vpd_mapped_to_another(tair, rh, vpd, others, stamps) is None
    unrelated = np.random.default_rng(11).gamma(2.0, 3.0, vpd.size)
    assert vpd_mapped_to_another(tair, rh, unrelated, others, stamps) is None
