"""Tests of the saturated-air gap check (fluxpart.saturated_gaps), round outliers48."""
import numpy as np
import pandas as pd
import pytest
from scipy import stats

from fluxpart import saturated_gaps
from fluxpart.config import Config

#: g C m-2 per record of 1 µmol m-2 s-1 over 30 min: 1800 s x 12.011e-6 g µmol-1 (IUPAC
#: conventional atomic weight of carbon, 12.011 g mol-1).
GRAMS_PER_HALF_HOUR = 1800 * 12.011e-6


def _record(seed, wet_effect, days=120):
    """Invented known-truth half hours: a saturating light response, fog on a third of
    the days (dimmer, VPD below 1 hPa), most foggy records lost (an open-path analyser),
    and `wet_effect` [µmol m-2 s-1] added to NEE in saturated air (wet leaves)."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-04-01", periods=days * 48, freq="30min")
    n, day_of = len(index), np.arange(days * 48) // 48
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60
    foggy = (rng.random(days) < 1 / 3)[day_of]
    clear = rng.uniform(0.4, 1.0, days)[day_of] * np.where(foggy, 0.4, 1.0)
    rg = np.clip(900 * np.sin(np.pi * (hour - 6) / 12), 0, None) * clear
    tair = 14 + 5 * np.sin(np.pi * (hour - 9) / 12) + rng.normal(0, 1, n)
    vpd = np.where(foggy, rng.uniform(0, 1, n), rng.uniform(1, 12, n))
    nee = 3 - 20 * rg / (rg + 300) + wet_effect * (vpd < 1) + rng.laplace(0, 0.7, n)
    lost = rng.random(n) < np.where(vpd < 1, 0.8, 0.1)
    return pd.DataFrame({"is_night": rg < 10, "nee_measured": np.where(lost, np.nan, nee),
                         "rg_filled": rg, "tair_filled": tair, "vpd_filled": vpd},
                        index=index)


def test_a_planted_wet_leaf_effect_is_recovered_and_sized():
    """Known truth (invented data): 1.5 µmol m-2 s-1 less uptake in saturated air is read
    within 4 standard errors, and the bias is -contrast x the saturated gaps x the carbon
    of a half hour (1800 s x 12.011e-6 g µmol-1, IUPAC)."""
    series = _record(1, 1.5)
    table = saturated_gaps.saturated_gap_contrast(series, series.index.year, 30)
    row = table.loc[2021]
    assert abs(row["contrast"] - 1.5) < 4 * row["contrast_se"]
    assert row["z"] > saturated_gaps.MIN_Z
    assert row["gap_share"] > 3 * row["measured_share"]
    assert row["potential_bias"] == pytest.approx(
        -row["contrast"] * row["saturated_gaps"] * GRAMS_PER_HALF_HOUR, rel=1e-12)


def test_dim_fog_without_a_wet_leaf_effect_is_not_over_dispersed():
    """Null check (invented data): fog that only dims the light, over 30 draws. The
    adjusted contrast's z must be no wider than the standard normal (its variance below
    SciPy's chi-square bound at 0.1 %, its mean within 3.29 / sqrt(30)), so a false call
    at MIN_Z is no likelier than the normal's 0.27 %; on these draws its SE is cautious
    (the drier records' spread within a light class counts as noise)."""
    z = np.array([saturated_gaps.saturated_gap_contrast(
        s, s.index.year, 30).loc[2021, "z"] for s in (_record(100 + k, 0.0, days=60)
                                                      for k in range(30))])
    assert np.isfinite(z).all()
    assert z.var(ddof=1) <= stats.chi2.ppf(0.999, 29) / 29
    assert abs(z.mean()) <= stats.norm.ppf(0.9995) / np.sqrt(30)
    assert (np.abs(z) < saturated_gaps.MIN_Z).all()


def test_the_warning_names_the_bias_and_the_coverage_it_leaves():
    """The coverage of a normal 95 % interval under a bias of b sigmas,
    Phi(1.96 - b) - Phi(-1.96 - b) (SciPy's norm): 83 % at one sigma, 11 % at 3.2."""
    table = pd.DataFrame({"day_gaps": [1000, 1000, 1000], "saturated_gaps": [500, 500, 500],
                          "gap_share": [0.5] * 3, "measured_share": [0.05] * 3,
                          "strata_share": [0.9] * 3, "contrast": [1.0, 1.0, 0.1],
                          "contrast_se": [0.2, 0.5, 0.01], "z": [5.0, 2.0, 10.0],
                          "potential_bias": [-32.0, -32.0, -1.0]},
                         index=[2021, 2022, 2023])
    sigma = pd.Series([10.0, 10.0, 10.0], index=[2021, 2022, 2023])
    (text,) = saturated_gaps.saturated_gap_warnings(table, sigma)
    coverage = stats.norm.cdf(1.96 - 3.2) - stats.norm.cdf(-1.96 - 3.2)
    assert text.startswith("2021: 500 of the 1000 daytime NEE gaps (50 %) fall in saturated")
    assert "run low (too much uptake) by about 32 g C m-2, 3.2 times the sigma" in text
    assert f"about {100 * coverage:.0f} % of the time" in text
    assert text.endswith("beside the year's NEE and its interval, which do not include it")
    one = stats.norm.cdf(1.96 - 1) - stats.norm.cdf(-1.96 - 1)
    assert round(100 * one) == 83          # the figure MIN_BIAS_SIGMAS' comment quotes
    assert saturated_gaps.saturated_gap_warnings(table.assign(potential_bias=-9.0),
                                                 sigma) == []
    (other,) = saturated_gaps.saturated_gap_warnings(
        table.iloc[[0]].assign(contrast=-1.0, z=-5.0, potential_bias=32.0), sigma)
    assert "take up 1.00 µmol m-2 s-1 more CO2" in other
    assert "run high (too little uptake) by about 32 g C m-2" in other


def test_a_record_without_saturated_air_or_vpd_is_not_checked():
    """Edge cases: no VPD at all, and dry air only, give an empty table and no warning."""
    series = _record(2, 1.5, days=30)
    annual = pd.DataFrame({"nee_ci95_low": [-10.0], "nee_ci95_high": [10.0]}, index=[2021])
    for frame in (series.assign(vpd_filled=np.nan), series.assign(vpd_filled=8.0)):
        assert saturated_gaps.saturated_gap_contrast(frame, frame.index.year, 30).empty
        assert saturated_gaps.run_warnings(frame, annual, frame.index.year, 30,
                                           Config()) == []


def test_run_warnings_reads_the_interval_and_the_fill_windows():
    """Wiring: a planted effect whose bias exceeds the year's sigma is named through
    run_warnings with the config's vpd_tolerance, and not where the interval is wide."""
    series = _record(3, 2.0)
    years = series.index.year
    narrow = pd.DataFrame({"nee_ci95_low": [-1.0], "nee_ci95_high": [1.0]}, index=[2021])
    (text,) = saturated_gaps.run_warnings(series, narrow, years, 30, Config(vpd_tolerance=4.0))
    assert "vpd_tolerance = 4 hPa" in text and "1-4 hPa" in text
    wide = narrow * 1e4
    assert saturated_gaps.run_warnings(series, wide, years, 30, Config()) == []


def test_the_demo_site_is_not_named(demo_default_run):
    """False alarm on the example (invented demo site, no wet-leaf physics): none."""
    _, _, result = demo_default_run
    assert not [w for w in result.warnings if "fall in saturated air" in w]
