"""Dark records that take up CO2 (fluxpart.night_uptake), found by a sign test per month.

Outside facts checked: the one-sided sign test's p value against SciPy's exact binomial
test (scipy.stats.binomtest, SciPy 1.17, alternative="greater"); civil twilight ends with
the sun 6 degrees below the horizon (the astronomical definition (m)); respiration is
never negative, so dark NEE is respiration plus a random error symmetric about 0
(Richardson et al. 2006, Agric. For. Meteorol. 136, 1-18: double-exponential). The
records are invented, for known-truth recovery: a CAM crop's dark uptake (Osmond 1978,
Annu. Rev. Plant Physiol. 29, 379-414 (m): CAM plants fix CO2 at night) and a frozen
winter whose respiration is about zero.
"""

import numpy as np
import pandas as pd
import pytest
from scipy.stats import binomtest, norm

from fluxpart import Site
from fluxpart.errors import InsufficientDataError
from fluxpart.night_uptake import (
    DARK_SUN_ELEVATION,
    MIN_DARK_RECORDS,
    SIGN_TEST_Z,
    STAGE,
    dark_uptake_months,
    named_in_failure,
    uptake_note,
)
from fluxpart.pipeline import check_record
from fluxpart.preflight import Finding
from fluxpart.solar import solar_geometry

SITE = Site(name="Invented agave plot (FICTIONAL)", latitude=20.7, longitude=-103.6,
            utc_offset=-6)


def _dark_record(days=60, seed=0):
    """Half-hourly stamps of `days` days and their sun elevation at the invented site."""
    index = pd.date_range("2021-03-01", periods=48 * days, freq="30min")
    elevation = solar_geometry(index, SITE, interval_minutes=30)["sun_elevation"].to_numpy()
    return index, elevation, np.random.default_rng(seed)


def test_sign_statistic_matches_the_exact_binomial_test():
    """The month's z gives the one-sided p of scipy.stats.binomtest within 15 %."""
    index, elevation, rng = _dark_record(days=31)
    dark = elevation < DARK_SUN_ELEVATION
    nee = np.where(dark, 0.3 - 0.45 + rng.laplace(0, 1.0, index.size), np.nan)
    months = dark_uptake_months(index, nee, elevation)
    for _, row in months.iterrows():
        n, k = int(row["records"]), int(row["negative"])
        exact = binomtest(k, n, 0.5, alternative="greater").pvalue
        # normal approximation with continuity correction: good to a few percent of p
        # for n of several hundred and p above 1e-6 (Conover 1999 (m))
        assert n > 200
        assert norm.sf(row["z"]) == pytest.approx(exact, rel=0.15)


def test_only_records_after_civil_twilight_are_tested():
    """Records with the sun above -6 degrees (twilight) do not enter the count."""
    index, elevation, rng = _dark_record()
    twilight = (elevation < 0) & (elevation >= -6.0)
    dark = elevation < -6.0
    # twilight photosynthesis makes every twilight record negative; the dark ones respire
    nee = np.where(twilight, -1.0, np.where(dark, 1.0 + rng.laplace(0, 0.4, index.size),
                                            -5.0))
    months = dark_uptake_months(index, nee, elevation)
    assert months["records"].sum() == dark.sum()
    assert uptake_note(months) is None
    assert DARK_SUN_ELEVATION == -6.0


def test_cam_uptake_in_the_dark_is_named():
    """Known truth: respiration 1.0 and CAM uptake 2.5 µmol m-2 s-1 in the dark, named."""
    index, elevation, rng = _dark_record()
    dark = elevation < DARK_SUN_ELEVATION
    nee = np.where(dark, 1.0 - 2.5, -4.0) + rng.laplace(0, 0.6, index.size)
    months = dark_uptake_months(index, nee, elevation)
    assert (months["z"] > SIGN_TEST_Z).all()
    note = uptake_note(months, "co2_flux")
    assert note.startswith("'co2_flux': the measured NEE of the dark records")
    assert "2 of 2 months (2021-03, 2021-04" in note
    assert "crassulacean acid metabolism" in note
    # the NEE budget stands for plants, not for a heated open-path analyser's apparent
    # uptake, which is in the measured NEE itself (Burba et al. 2008)
    assert "budget stands where plants take the CO2 up" in note
    assert "the measured NEE itself is biased, by day too" in note


def test_respiration_near_zero_under_a_heavy_tailed_error_is_not_named():
    """Known truth: a frozen winter (respiration 0.02 µmol m-2 s-1), Laplace error of
    sigma 0.8 over 12 months: never named (a negative record has probability < 1/2)."""
    index = pd.date_range("2021-01-01", periods=48 * 365, freq="30min")
    elevation = solar_geometry(index, SITE, interval_minutes=30)["sun_elevation"].to_numpy()
    for seed in range(5):
        rng = np.random.default_rng(seed)
        nee = 0.02 + rng.laplace(0, 0.8 / np.sqrt(2), index.size)
        months = dark_uptake_months(index, nee, elevation)
        assert len(months) == 12
        assert months["z"].max() < SIGN_TEST_Z
        assert uptake_note(months) is None


def test_months_with_too_few_dark_records_are_not_tested():
    """A month with fewer than MIN_DARK_RECORDS measured dark records is left untested."""
    index, elevation, rng = _dark_record(days=31)
    dark = np.flatnonzero(elevation < DARK_SUN_ELEVATION)
    nee = np.full(index.size, np.nan)
    nee[dark[:MIN_DARK_RECORDS - 1]] = -3.0
    months = dark_uptake_months(index, nee, elevation)
    assert int(months["records"].iloc[0]) == MIN_DARK_RECORDS - 1
    assert uptake_note(months) is None
    nee[dark[:MIN_DARK_RECORDS]] = -3.0
    assert uptake_note(dark_uptake_months(index, nee, elevation)) is not None


def test_no_dark_record_gives_an_empty_table():
    """Polar day or an NEE column without a dark value: no month, no note."""
    index, elevation, _ = _dark_record(days=2)
    months = dark_uptake_months(index, np.full(index.size, np.nan), elevation)
    assert months.empty and uptake_note(months) is None


def test_the_note_is_appended_to_a_partitioning_error():
    """named_in_failure adds the preflight's note to the error a fit raises within."""
    findings = [Finding("u* threshold", "other", False), Finding(STAGE, "dark uptake", False)]
    with pytest.raises(InsufficientDataError,
                       match=r"^E0 fails\. The likely cause, found before fitting: dark"):
        with named_in_failure(findings):
            raise InsufficientDataError("E0 fails.")
    with pytest.raises(InsufficientDataError, match=r"^E0 fails\.$"):
        with named_in_failure(findings[:1]):
            raise InsufficientDataError("E0 fails.")
    with pytest.raises(KeyError):
        with named_in_failure(findings):
            raise KeyError("not a partitioning error")


def test_check_lists_the_dark_uptake_of_an_invented_cam_record():
    """Wiring: check_record's findings hold the note (not fatal) for a CAM-like record."""
    index = pd.date_range("2021-01-01", periods=48 * 120, freq="30min")
    geometry = solar_geometry(index, SITE, interval_minutes=30)
    elevation = geometry["sun_elevation"].to_numpy()
    rng = np.random.default_rng(3)
    sun = np.clip(np.sin(np.radians(elevation)), 0, None)
    rg = 800 * sun
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60
    tair = 20 + 6 * np.sin(2 * np.pi * (hour - 9) / 24)
    dark = elevation < 0
    nee = np.where(dark, 1.2 - 2.6, 1.5 - 0.004 * rg) + rng.laplace(0, 0.4, index.size)
    frame = pd.DataFrame({"nee": nee, "rg": rg, "tair": tair,
                          "vpd": 8 + 6 * np.sin(2 * np.pi * (hour - 9) / 24),
                          "ustar": 0.25 + 0.1 * rng.random(index.size)}, index=index)
    _, findings = check_record(frame, SITE)
    found = [f for f in findings if f.stage == STAGE]
    assert len(found) == 1 and not found[0].fatal
    assert "4 of 4 months" in found[0].message
    # the same record without the uptake: nothing named
    frame["nee"] = np.where(dark, 1.2, 1.5 - 0.004 * rg) + rng.laplace(0, 0.4, index.size)
    _, findings = check_record(frame, SITE)
    assert not [f for f in findings if f.stage == STAGE]
