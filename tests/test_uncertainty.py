"""Random error of NEE, Monte Carlo annual sums, the uncertainty budget, t CO2 ha-1."""

import numpy as np
import pandas as pd
import pytest
import scipy
from conftest import load_reference
from scipy import integrate, stats

from fluxpart import demo
from fluxpart.errors import InsufficientDataError, MissingColumnError, SpacingError
from fluxpart.uncertainty import (
    ANNUAL_COLUMNS,
    artificial_gap_errors,
    carbon_accounting_units,
    draw_random_errors,
    e0_sensitivity,
    gap_runs,
    gapfill_error_model,
    monte_carlo_sums,
    paired_differences,
    random_error_model,
    record_random_error,
    timeseries_random_error,
    uncertainty_budget,
    ustar_sigma,
)

REFERENCE = load_reference("uncertainty")


@pytest.fixture(scope="module")
def demo_result(demo_draws20_run):
    """One processed demo year (few u* bootstrap draws, so the scenario columns exist:
    the session's 20-draw run of seed 0) and its truth."""
    return demo_draws20_run, demo.site_year(seed=0)[1]


@pytest.fixture(scope="module")
def demo_sigma(demo_result):
    """Per-record random error of the demo year and its model."""
    return timeseries_random_error(demo_result[0].timeseries)


def _known_truth_record(days=365, seed=1, interval=30, cloudy_share=0.2):
    """Invented record with a planted sigma(|NEE|) (known-truth recovery only).

    Drivers repeat from day to day apart from a slow season, and a fifth of the
    days are cloudy (Rg x 0.3, uptake x 0.3), so only pairs that pass the
    similarity criteria have nearly equal true fluxes.
    """
    rng = np.random.default_rng(seed)
    per_day = 1440 // interval
    index = pd.date_range("2023-01-01", periods=days * per_day, freq=f"{interval}min")
    hour = (index.hour + index.minute / 60 + interval / 120).to_numpy()
    season_day = (index.day_of_year - 1).to_numpy() + hour / 24
    light = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    cloudy = (rng.random(days) < cloudy_share)[np.arange(days).repeat(per_day)]
    clear = np.where(cloudy, 0.3, 1.0)
    season = 0.5 - 0.5 * np.cos(2 * np.pi * season_day / 365)
    rg = (300 + 600 * season) * light * clear
    tair = 2 + 20 * season + 4 * np.sin((hour - 9) / 24 * 2 * np.pi)
    vpd = 1 + 10 * season * light
    nee_true = 2 * np.exp(0.069 * (tair - 10)) - 25 * season * light * clear
    sigma = np.where(nee_true < 0, 0.6 + 0.12 * np.abs(nee_true), 0.4 + 0.2 * np.abs(nee_true))
    nee = nee_true + rng.laplace(0.0, sigma / np.sqrt(2), nee_true.size)
    nee[rng.random(nee.size) < 0.3] = np.nan
    return index, nee, rg, tair, vpd


def _planted_sigma(nee):
    nee = np.asarray(nee, dtype=float)
    return np.where(nee < 0, 0.6 + 0.12 * np.abs(nee), 0.4 + 0.2 * np.abs(nee))


# --------------------------------------------------------------------------- Laplace draws

def test_laplace_draws_match_scipy_moments(rng):
    """Drawn errors have the Laplace variance 2b^2 and excess kurtosis 3 of scipy.stats.laplace."""
    sigma = np.full(1000, 2.0)
    errors = draw_random_errors(sigma, 1000, rng).ravel()
    scale = 2.0 / np.sqrt(2.0)
    # scipy.stats.laplace(scale=b).stats(moments="vk"), SciPy version printed on failure.
    variance, kurtosis = stats.laplace(scale=scale).stats(moments="vk")
    assert float(variance) == pytest.approx(REFERENCE["laplace"]["variance_per_scale_squared"]
                                            * scale**2)
    assert float(kurtosis) == pytest.approx(REFERENCE["laplace"]["excess_kurtosis"])
    # 1e6 draws: s.e. of the variance 0.22 % (sqrt(5/n)), of the kurtosis 0.05
    # (sqrt(2484/n) for Laplace); tolerances are about five standard errors.
    assert errors.var() == pytest.approx(float(variance), rel=0.012), scipy.__version__
    assert stats.kurtosis(errors) == pytest.approx(float(kurtosis), abs=0.25), scipy.__version__
    assert abs(errors.mean()) < 5 * 2.0 / 1000
    # The whole distribution, against scipy.stats.laplace's cdf (Kolmogorov–Smirnov).
    assert stats.kstest(errors[:20000], stats.laplace(scale=scale).cdf).pvalue > 1e-3


def test_laplace_draws_keep_nan_and_zero():
    """A NaN sigma draws NaN, a zero sigma draws exactly zero."""
    errors = draw_random_errors([np.nan, 0.0, 1.0], 4, np.random.default_rng(0))
    assert errors.shape == (4, 3)
    assert np.isnan(errors[:, 0]).all() and (errors[:, 1] == 0).all()
    assert np.isfinite(errors[:, 2]).all()


def test_difference_of_two_laplace_errors():
    """The pair-difference density used in the Notes integrates to 1, variance 4b^2, E|z| = 3b/2."""
    b = 0.7

    def density(z):
        return (1 + abs(z) / b) * np.exp(-abs(z) / b) / (4 * b)

    # scipy.integrate.quad over the real line; the variance of x1 - x2 is 2 x 2b^2.
    assert integrate.quad(density, -np.inf, np.inf)[0] == pytest.approx(1.0, rel=1e-8)
    assert integrate.quad(lambda z: z * z * density(z), -np.inf, np.inf)[0] == pytest.approx(
        4 * b**2, rel=1e-8)
    mean_abs = integrate.quad(lambda z: abs(z) * density(z), -np.inf, np.inf)[0]
    assert mean_abs == pytest.approx(REFERENCE["laplace"]["mean_absolute_difference_per_scale"]
                                     * b, rel=1e-8)


# --------------------------------------------------------------------------- Monte Carlo

def test_monte_carlo_matches_the_analytic_sum_of_variances(demo_sigma):
    """With independent record errors, the MC sd of the annual sum equals sqrt(sum sigma^2)."""
    sigma, _ = demo_sigma
    index = demo.site_year(seed=0)[0].index
    sums = monte_carlo_sums(sigma, index, 30, draws=4000, seed=3)
    # Assumption of the method: independent errors, so Var(sum) = sum of variances.
    analytic = np.sqrt(np.nansum(sigma**2)) * 1800 * 12.011e-6
    assert sums.loc[2021, "analytic_sd"] == pytest.approx(analytic, rel=1e-12)
    # 4000 draws: s.e. of a standard deviation ~ 1/sqrt(2 x 4000) = 1.1 %; 5 % is 4.5 s.e.
    assert sums.loc[2021, "random_sd"] == pytest.approx(analytic, rel=0.05)
    # The sum of 17 520 independent errors is close to normal: 95 % interval ~ ±1.96 sd.
    width = sums.loc[2021, "random_percentile_97_5"] - sums.loc[2021, "random_percentile_2_5"]
    assert width == pytest.approx(2 * 1.96 * analytic, rel=0.08)
    assert sums.loc[2021, "records"] == 17520 and sums.loc[2021, "draws"] == 4000


def test_monte_carlo_hourly_leap_year_and_two_years():
    """Hourly records over a leap and a common year: one row per year, sd per year."""
    index = pd.date_range("2024-01-01", "2025-12-31 23:00", freq="60min")
    sigma = np.full(len(index), 1.5)
    sums = monte_carlo_sums(sigma, index, 60, draws=2000, seed=1)
    assert list(sums.index) == [2024, 2025]
    # Gregorian calendar (common practice): 366 x 24 and 365 x 24 hourly records.
    assert list(sums["records"]) == [8784, 8760]
    per_record = 3600 * 12.011e-6
    for year, n in ((2024, 8784), (2025, 8760)):
        expected = 1.5 * np.sqrt(n) * per_record
        assert sums.loc[year, "analytic_sd"] == pytest.approx(expected, rel=1e-12)
        # 2000 draws: s.e. 1.6 %; 6 % is 3.8 s.e.
        assert sums.loc[year, "random_sd"] == pytest.approx(expected, rel=0.06)


def test_monte_carlo_is_deterministic_and_nan_aware():
    """Same seed, same numbers; another seed, other numbers; a NaN sigma makes its year NaN."""
    index = pd.date_range("2021-12-30", periods=4 * 48, freq="30min")
    sigma = np.linspace(0.5, 2.0, len(index))
    first = monte_carlo_sums(sigma, index, 30, draws=50, seed=7)
    pd.testing.assert_frame_equal(first, monte_carlo_sums(sigma, index, 30, draws=50, seed=7))
    assert not first.equals(monte_carlo_sums(sigma, index, 30, draws=50, seed=8))
    sigma[-1] = np.nan
    gap = monte_carlo_sums(sigma, index, 30, draws=50, seed=7)
    assert np.isfinite(gap.loc[2021, "random_sd"]) and np.isnan(gap.loc[2022, "random_sd"])
    assert gap.loc[2021, "random_sd"] == first.loc[2021, "random_sd"]


def test_monte_carlo_sums_do_not_depend_on_the_rows_scaled_at_once(monkeypatch):
    """Round speed19: the draws are scaled and summed a few rows at a time; every row's
    sums are its own, so 2, 3 or all draws at a time give the same bits, over two budget
    years split inside a block. Known-truth check of the sums (the method's assumption of
    independent errors): their sd is √Σσ² (rel. 12 %: 300 draws, s.e. 4 %)."""
    import fluxpart.uncertainty as module

    index = pd.date_range("2021-11-01", periods=120 * 48, freq="30min")
    sigma = np.random.default_rng(19).gamma(2.0, 1.0, len(index))
    keys = np.where(index < "2022-01-15", 2021, 2022)
    results = []
    for scaled in (1, 3 * len(index), 1 << 15, 1 << 30):
        monkeypatch.setattr(module, "_SCALED_ELEMENTS", scaled)
        results.append(monte_carlo_sums(sigma, index, 30, draws=300, seed=5, year_keys=keys))
    for other in results[1:]:
        assert other.to_numpy().tobytes() == results[0].to_numpy().tobytes()
    for year in (2021, 2022):
        analytic = np.sqrt(np.sum(sigma[keys == year] ** 2)) * 1800 * 12.011e-6
        assert results[0].loc[year, "random_sd"] == pytest.approx(analytic, rel=0.12)


def test_monte_carlo_rejects_bad_arguments():
    """A wrong interval or too few draws is a clear error."""
    index = pd.date_range("2021-01-01", periods=10, freq="30min")
    with pytest.raises(SpacingError, match="interval_minutes = 7"):
        monte_carlo_sums(np.ones(10), index, 7)
    with pytest.raises(ValueError, match="draws = 1"):
        monte_carlo_sums(np.ones(10), index, 30, draws=1)
    with pytest.raises(ValueError, match="one stamp per sigma"):
        monte_carlo_sums(np.ones(9), index, 30)


# --------------------------------------------------------------------------- paired records

def test_paired_estimator_recovers_a_planted_linear_sigma():
    """Known truth: sigma = 0.6 + 0.12|NEE| (uptake), 0.4 + 0.2|NEE| (release) is recovered."""
    index, nee, rg, tair, vpd = _known_truth_record()
    model = random_error_model(paired_differences(index, nee, rg, tair, vpd))
    assert list(model.coefficients["source"]) == ["fitted", "fitted"]
    fluxes = np.array([-15.0, -8.0, -3.0, 1.0, 3.0, 5.0])
    # Eight seeds gave errors of at most 15 %: binning on the noisy pair mean flattens
    # the line a little (regression dilution), and true fluxes change a little in 24 h.
    np.testing.assert_allclose(model.predict(fluxes), _planted_sigma(fluxes), rtol=0.2)
    assert (model.coefficients["slope"] > 0).all()


def test_similarity_criteria_keep_out_dissimilar_days():
    """Without the Rg criterion, cloudy/clear pairs inflate sigma; with it, they are excluded."""
    index, nee, rg, tair, vpd = _known_truth_record()
    pairs = paired_differences(index, nee, rg, tair, vpd)
    lag = 48
    first = index.get_indexer(pairs.index)
    # Richardson et al. (2006) (m), with Rg for PPFD: |ΔRg| < 35 W m-2, |ΔTair| < 3 °C.
    assert (np.abs(rg[first] - rg[first + lag]) < 35).all()
    assert (np.abs(tair[first] - tair[first + lag]) < 3).all()
    assert np.isfinite(pairs[["first", "second"]].to_numpy()).all()
    loose = random_error_model(paired_differences(index, nee, rg, tair, vpd,
                                                  rg_tolerance=np.inf))
    assert loose.predict([-8.0])[0] > 1.3 * _planted_sigma([-8.0])[0]


def test_paired_differences_are_one_day_apart_in_hourly_records():
    """Hourly records pair with the record 24 stamps later; the difference and mean are exact."""
    index = pd.date_range("2022-06-01", periods=72, freq="60min")
    nee = np.arange(72.0)
    same = np.zeros(72)
    pairs = paired_differences(index, nee, same, same, same)
    assert len(pairs) == 48
    assert (pairs["difference"] == -24.0).all()
    assert (pd.DatetimeIndex(pairs.index) == index[:48]).all()
    np.testing.assert_array_equal(pairs["mean"], nee[:48] + 12.0)


def test_paired_differences_rejects_irregular_time():
    """An irregular time axis is a SpacingError naming the row."""
    index = pd.DatetimeIndex(["2022-01-01 00:00", "2022-01-01 00:30", "2022-01-01 01:30"])
    with pytest.raises(SpacingError, match="row 2"):
        paired_differences(index, np.ones(3), np.ones(3), np.ones(3), np.ones(3))


def test_too_few_pairs_is_insufficient_data():
    """Fewer pairs than one bin needs is an InsufficientDataError; one class borrows the other."""
    pairs = pd.DataFrame({"difference": np.ones(10), "mean": np.ones(10)})
    with pytest.raises(InsufficientDataError, match="30 of one flux class"):
        random_error_model(pairs)
    rng = np.random.default_rng(5)
    release = pd.DataFrame({"difference": rng.laplace(0, 1, 400), "mean": rng.uniform(0, 8, 400)})
    model = random_error_model(release)
    assert model.coefficients.loc["uptake", "source"] == "from release"
    assert model.predict([-3.0])[0] == model.predict([3.0])[0]
    with pytest.raises(MissingColumnError, match="difference"):
        random_error_model(pd.DataFrame({"mean": [1.0]}))


def test_record_random_error_rules():
    """Measured: the model; filled: max(model, fill spread) if enough records; unfilled: NaN."""
    rng = np.random.default_rng(2)
    pairs = pd.DataFrame({"difference": rng.laplace(0, 1, 2000),
                          "mean": np.r_[rng.uniform(-10, 0, 1000), rng.uniform(0, 10, 1000)]})
    model = random_error_model(pairs)
    nee = np.array([-5.0, -5.0, -5.0, 2.0, np.nan])
    quality = np.array([0, 1, 3, 2, -1])
    spread = np.array([np.nan, 9.0, 9.0, 0.01, np.nan])
    count = np.array([0, 10, 3, 20, 0])
    sigma = record_random_error(model, nee, quality, spread, count)
    base = model.predict(nee)
    assert sigma[0] == base[0]            # measured
    assert sigma[1] == 9.0                # filled from 10 records with a wide spread
    assert sigma[2] == base[2]            # only 3 records averaged: spread not used
    assert sigma[3] == base[3]            # spread smaller than the model
    assert np.isnan(sigma[4])             # unfilled


def test_demo_random_error_near_the_planted_noise(demo_sigma, demo_result):
    """Known truth: the demo plants Laplace noise of s.d. 0.5 + 0.15|NEE| (fluxpart.demo)."""
    sigma, model = demo_sigma
    fluxes = np.array([-8.0, -3.0, 1.0, 4.0])
    # Day-to-day changes of the true flux widen the pair differences (Hollinger &
    # Richardson 2005): sigma is an upper estimate; 35 % covers it on this record.
    np.testing.assert_allclose(model.predict(fluxes), 0.5 + 0.15 * np.abs(fluxes), rtol=0.35)
    filled = (demo_result[0].timeseries["nee_fill_quality"] != "unfilled").to_numpy()
    assert np.isfinite(sigma[filled]).all() and (sigma[filled] > 0).all()


# --------------------------------------------------------------------------- budget

def _one_year(values: dict, year=2021):
    return pd.DataFrame({k: [v] for k, v in values.items()}, index=pd.Index([year], name="year"))


_RANDOM = {"random_sd": 3.0, "random_percentile_2_5": -6.0, "random_percentile_97_5": 6.0,
           "analytic_sd": 3.0}


def test_uncertainty_budget_combines_parts_and_states_a_95_percent_interval():
    """1-sigma parts add in quadrature; the interval is the sum ± z(0.975) x total.

    z(0.975) = 1.959964 (scipy.stats.norm.ppf(0.975)); 3-4-5 and 5-12-13 triangles.
    """
    annual = _one_year({"nee": -200.0, "gpp_nighttime": 1000.0, "gpp_daytime": 1010.0,
                        "reco_nighttime": 800.0, "reco_daytime": 780.0})
    parts = _one_year({"nee_uncertainty_random": 3.0, "nee_uncertainty_gapfill": 0.0,
                       "nee_uncertainty_ustar": 4.0, "gpp_nighttime_uncertainty_total": 13.0,
                       "reco_nighttime_uncertainty_total": 5.0,
                       "gpp_daytime_uncertainty_total": 12.0,
                       "reco_daytime_uncertainty_total": 5.0,
                       "reco_nighttime_uncertainty_parameters": 4.0,
                       "reco_daytime_uncertainty_parameters": 4.0,
                       "gpp_uncertainty_partitioning": 5.0,
                       "reco_uncertainty_partitioning": 3.0})
    out = uncertainty_budget(annual, _one_year(_RANDOM), parts)
    row = out.loc[2021]
    z = stats.norm.ppf(0.975)
    assert z == pytest.approx(REFERENCE["interval"]["z_975"], abs=1e-6)
    assert row["nee_uncertainty_total"] == pytest.approx(5.0)
    assert row["nee_ci95_low"] == pytest.approx(-200.0 - z * 5.0)
    assert row["nee_ci95_high"] == pytest.approx(-200.0 + z * 5.0)
    assert row["gpp_daytime_ci95_high"] - row["gpp_daytime_ci95_low"] == pytest.approx(2 * z * 12)
    # the Monte Carlo random part (3) replaces the analytic one (3) in nighttime GPP
    assert row["gpp_nighttime_uncertainty_total"] == pytest.approx(13.0)
    assert row["uncertainty_parts_missing"] == ""
    assert set(out.columns) <= set(ANNUAL_COLUMNS)


def test_uncertainty_budget_without_parts_names_them_missing():
    """Only the random part known: the others are NaN and named; NEE's interval is random-only."""
    annual = _one_year({"nee": -200.0, "gpp_nighttime": 1000.0, "gpp_daytime": 990.0,
                        "reco_nighttime": 800.0, "reco_daytime": 790.0}, 2022)
    row = uncertainty_budget(annual, _one_year(_RANDOM, 2022)).loc[2022]
    assert np.isnan(row["nee_uncertainty_ustar"])
    assert row["nee_uncertainty_total"] == 3.0
    assert row["uncertainty_parts_missing"] == "gap filling, ustar, parameters, partitioning"
    assert np.isnan(row["gpp_daytime_ci95_low"])


def test_ustar_sigma_from_percentile_runs():
    """16/50/84 runs: half the range; 5/50/95: range / (2 x 1.644854) (scipy.stats.norm.ppf)."""
    sums = pd.DataFrame({"central": [10.0], "ustar_p16": [8.0], "ustar_p50": [10.5],
                         "ustar_p84": [12.0]})
    assert ustar_sigma(sums, (16, 50, 84)).iloc[0] == pytest.approx(
        4.0 / (2 * stats.norm.ppf(0.84)))
    wide = sums.rename(columns={"ustar_p16": "ustar_p05", "ustar_p84": "ustar_p95"})
    assert ustar_sigma(wide, (5, 50, 95)).iloc[0] == pytest.approx(4.0 / (2 * 1.6448536))
    assert np.isnan(ustar_sigma(sums[["central"]], ()).iloc[0])


def test_gap_runs():
    """Runs of missing records: starts and lengths."""
    starts, lengths = gap_runs([False, True, True, False, True, False, True, True, True])
    np.testing.assert_array_equal(starts, [1, 4, 6])
    np.testing.assert_array_equal(lengths, [2, 1, 3])


def test_gapfill_error_model_recovers_planted_variances_and_bias():
    """Known truth: S = bias n + sqrt(b) n Z1 + sqrt(a n) Z2 + noise recovers a, b and bias."""
    rng = np.random.default_rng(5)
    n = rng.integers(1, 200, size=6000).astype(float)
    a, b, bias, noise = 1.5, 0.04, -0.3, 0.8
    total = (bias * n + np.sqrt(b) * n * rng.standard_normal(n.size)
             + np.sqrt(a * n) * rng.standard_normal(n.size)
             + noise * np.sqrt(n) * rng.standard_normal(n.size))
    errors = pd.DataFrame({"round": 0, "gap": np.arange(n.size), "record_class": "night",
                           "records": n.astype(int), "length": n.astype(int),
                           "error_sum": total, "noise_variance": noise**2 * n})
    model = gapfill_error_model(errors)
    row = model.loc["night"]
    assert row["bias"] == pytest.approx(bias, abs=3 * row["bias_se"])
    assert row["correlated_variance"] == pytest.approx(b, rel=0.15)
    assert row["independent_variance"] == pytest.approx(a, rel=0.35)
    assert np.isnan(model.loc["day", "bias"])          # no day scores


def test_two_variable_nonnegative_fit_matches_scipy_nnls():
    """The enumerated two-variable NNLS equals scipy.optimize.nnls (a general-purpose
    reference solver) on interior, boundary and all-zero optima."""
    from scipy.optimize import nnls

    from fluxpart.uncertainty import _nonnegative_line_fit

    rng = np.random.default_rng(17)
    faces = {"interior": 0, "a=0": 0, "b=0": 0, "zero": 0}
    for _trial in range(400):
        x = rng.integers(1, 120, size=int(rng.integers(3, 60))).astype(float)
        a, b = rng.normal(0, 2), rng.normal(0, 0.05)
        y = a + b * x + rng.normal(0, rng.uniform(0.1, 5.0), x.size)
        expected, _ = nnls(np.column_stack([np.ones_like(x), x]), y)
        got = _nonnegative_line_fit(x, y)
        np.testing.assert_allclose(got, expected, rtol=1e-9, atol=1e-12)
        key = ("zero" if not any(got) else "a=0" if got[0] == 0 else
               "b=0" if got[1] == 0 else "interior")
        faces[key] += 1
    assert all(count > 0 for count in faces.values()), faces   # every case was exercised


def test_normal_quantiles_match_scipy():
    """statistics.NormalDist().inv_cdf, used for the z values, equals scipy.stats.norm.ppf."""
    from statistics import NormalDist

    for p in (0.025, 0.05, 0.159, 0.16, 0.5, 0.84, 0.841, 0.95, 0.975):
        assert NormalDist().inv_cdf(p) == pytest.approx(stats.norm.ppf(p), rel=1e-14, abs=1e-15)


def test_artificial_gaps_score_a_biased_fill():
    """A fill that returns truth + 0.5 shows a bias of 0.5 against noisy measured records."""
    rng = np.random.default_rng(2)
    n = 4000
    truth = np.sin(np.arange(n) / 20.0) * 5
    measured = truth + rng.laplace(0, 1.0 / np.sqrt(2), n)
    measured[rng.random(n) < 0.3] = np.nan
    night = (np.arange(n) // 24) % 2 == 0

    def fill(values, hidden):
        assert hidden is None
        return np.where(np.isnan(values), truth + 0.5, values)

    errors = artificial_gap_errors(measured, np.ones(n), night, fill, seed=1)
    assert set(errors["record_class"]) == {"night", "day"}
    scored = errors["records"].sum()
    # each round holds out a tenth of the measured records
    from fluxpart.uncertainty import _GAP_ROUNDS, _GAP_SHARE
    expected = _GAP_ROUNDS * _GAP_SHARE * np.isfinite(measured).sum()
    assert 2 / 3 * expected < scored <= 4 / 3 * expected
    model = gapfill_error_model(errors)
    assert model["bias"].to_numpy() == pytest.approx([0.5, 0.5], abs=0.1)
    # Fill error is a constant: no variance beyond the measurement noise (σ² = 1) removed;
    # the estimate of b (truly 0) scatters with the draw (up to ~0.02 over seeds and
    # rounds), so: the shared part b·n² of a gap of the mean scored length n stays below
    # 5 % of its noise n·σ²
    mean_records = errors["records"].mean()
    assert (model["correlated_variance"] * mean_records < 0.05).all()


def test_e0_sensitivity_keeps_night_sums_and_raises_warm_records():
    """E0 + δ: Lloyd–Taylor ratio exp(δ(1/(Tref-T0) - 1/(T-T0))) (Lloyd & Taylor 1994, eq. 11)."""
    from fluxpart.responses import lloyd_taylor

    temperature = np.tile(np.r_[np.full(12, 5.0), np.full(12, 20.0)], 8)
    night = temperature < 10
    reco = lloyd_taylor(temperature, 2.0, 200.0)
    blocks = np.repeat(np.arange(2), 96)
    delta = e0_sensitivity(reco, temperature, night, 200.0, 20.0, blocks)
    for block in (0, 1):
        assert delta[(blocks == block) & night].sum() == pytest.approx(0.0, abs=1e-9)
    expected = lloyd_taylor(20.0, 2.0, 220.0) / lloyd_taylor(5.0, 2.0, 220.0) * reco[0] - reco[12]
    assert delta[12] == pytest.approx(expected)
    assert (delta[~night] > 0).all()
    assert np.all(e0_sensitivity(reco, temperature, night, 200.0, 0.0, blocks) == 0)


def test_demo_annual_intervals_and_sigma_columns(demo_result):
    """Wiring: the demo states finite 95 % intervals around each sum and 1-sigma per period."""
    result, _ = demo_result
    row = result.annual.loc[2021]
    for flux in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        assert row[f"{flux}_ci95_low"] < row[flux] < row[f"{flux}_ci95_high"], flux
        assert row[f"{flux}_uncertainty_total"] >= row[f"{flux}_uncertainty_ustar"], flux
        for table in (result.daily, result.monthly):
            sigma = table[f"{flux}_sigma"]
            assert (sigma[table[flux].notna()] >= 0).all() and sigma.notna().any(), flux
    assert row["nee_uncertainty_total"] >= row["nee_uncertainty_gapfill"] > 0
    assert row["uncertainty_parts_missing"] == ""
    assert "gapfill_error_model" in result.parameters
    assert result.provenance["uncertainty"]["confidence"] == 0.95


# --------------------------------------------------------------------------- units

def test_tonnes_co2_per_hectare_against_the_handbook_value():
    """1 g C m-2 = 44.009/12.011 x 0.01 = 0.036641 t CO2 ha-1 (IUPAC atomic weights, SI)."""
    values = REFERENCE["carbon_accounting"]
    annual = pd.DataFrame({"nee": [-1.0, 250.0], "nee_uncertainty_total": [1.0, 10.0],
                           "nee_uncertainty_random": [0.5, 2.0]},
                          index=pd.Index([2021, 2022], name="year"))
    out = carbon_accounting_units(annual)
    # NEE = -1 g C m-2 is a net uptake of one gram: positive.
    assert out.loc[2021, "net_uptake_t_co2_per_ha"] == pytest.approx(
        values["t_co2_per_ha_per_g_c_per_m2"], rel=values["relative_tolerance"])
    assert out.loc[2022, "net_uptake_t_co2_per_ha"] < 0          # a net source
    assert out.loc[2022, "net_uptake_t_co2_per_ha_uncertainty"] == pytest.approx(
        10 * values["t_co2_per_ha_per_g_c_per_m2"], rel=values["relative_tolerance"])
    assert out.loc[2021, "net_uptake_t_co2_per_ha_uncertainty_random"] == pytest.approx(
        0.5 * values["co2_per_carbon"] * 0.01, rel=1e-6)
    with pytest.raises(MissingColumnError, match="nee"):
        carbon_accounting_units(annual.drop(columns="nee"))


def test_driver_weight_favours_the_temperature_that_fits_the_night_data():
    """BIC weight (Schwarz 1978): the better-fitting model gets weight near 1, equal fits 0.5."""
    from fluxpart.uncertainty import driver_weight

    rng = np.random.default_rng(4)
    truth = 2.0 + np.sin(np.arange(500) / 30.0)
    nee = truth + rng.normal(0, 0.3, truth.size)
    night = np.ones(truth.size, dtype=bool)
    worse = truth + 0.5
    assert driver_weight(nee, night, truth, worse) < 1e-6
    assert driver_weight(nee, night, worse, truth) > 1 - 1e-6
    assert driver_weight(nee, night, truth, truth) == pytest.approx(0.5)
    assert driver_weight(nee[:5], night[:5], truth[:5], worse[:5]) == 0.0


def test_driver_weight_counts_the_effective_records_of_autocorrelated_residuals():
    """Since 0.23.0 the weight's BIC counts n (1 - rho)/(1 + rho) records, not n (Wilks
    2011, section 5.2.4 (m)). Known truth on invented night records: residuals an AR(1)
    series of lag-1 correlation 0.6, so the evidence is that of n / 4 independent
    records and the weight's log-odds ln(w / (1 - w)) = -ΔBIC / 2 are a quarter of those
    over all n (ΔBIC is proportional to the records counted, Schwarz 1978). Nothing
    else tested driver_weight's count: reverted to n, this fails (review26)."""
    from fluxpart.uncertainty import driver_weight

    rng = np.random.default_rng(26)
    n = 4000
    noise = np.empty(n)
    noise[0] = rng.standard_normal()
    for i in range(1, n):
        noise[i] = 0.6 * noise[i - 1] + np.sqrt(1 - 0.36) * rng.standard_normal()
    truth = 2.0 + np.sin(np.arange(n) / 30.0)
    nee = truth + 0.3 * noise
    other = truth + 0.06                  # a worse respiration model
    night = np.ones(n, dtype=bool)
    weight = driver_weight(nee, night, truth, other)
    log_odds = np.log(weight / (1.0 - weight))
    all_records = -n * np.log(np.abs(nee - other).sum() / np.abs(nee - truth).sum())
    assert 0.0 < weight < 0.5 and all_records < -2.0       # the evidence favours the truth
    assert log_odds / all_records == pytest.approx((1 - 0.6) / (1 + 0.6), rel=0.1)
    # white residuals keep all n records: the same log-odds as over n
    white = truth + 0.3 * rng.standard_normal(n)
    full = -n * np.log(np.abs(white - other).sum() / np.abs(white - truth).sum())
    w_white = driver_weight(white, night, truth, other)
    assert np.log(w_white / (1.0 - w_white)) == pytest.approx(full, rel=0.05)


def test_laplace_delta_bic_is_the_difference_of_scipys_laplace_log_likelihoods():
    """ΔBIC under Laplace errors = -2 (ln L_model - ln L_reference) + k ln n, each ln L the
    maximised Laplace log-likelihood (scale = mean |residual|; scipy.stats.laplace)."""
    from scipy import stats

    from fluxpart.uncertainty import laplace_delta_bic

    rng = np.random.default_rng(11)
    model, reference = rng.laplace(0, 0.4, 300), rng.laplace(0, 0.5, 300)

    def log_likelihood(residual):
        return stats.laplace.logpdf(residual, loc=0.0, scale=np.mean(np.abs(residual))).sum()

    expected = -2.0 * (log_likelihood(model) - log_likelihood(reference)) + np.log(300)
    got = laplace_delta_bic(np.abs(model).sum(), np.abs(reference).sum(), 300,
                            extra_parameters=1)
    assert got == pytest.approx(expected, rel=1e-10)


def test_window_at_zero_takes_the_typical_relative_error_not_se_over_value():
    """A window Rref of 1e-5 ± 0.15 (a fit pressed against Rref = 0) would give a
    relative error of 15000; it takes the median se/value of the resolved windows
    (0.1 and 0.2 -> 0.15), as a window without a finite standard error does."""
    from fluxpart.uncertainty import window_membership

    starts = pd.to_datetime(["2021-06-01", "2021-06-05", "2021-06-09", "2021-06-13"])
    windows = pd.DataFrame({"window_start": starts, "window_end": starts + pd.Timedelta(days=4),
                            "rref": [1.0, 2.0, 1e-5, 3.0], "rref_se": [0.1, 0.4, 0.15, np.nan]})
    index = pd.date_range("2021-06-01", periods=16 * 48, freq="30min")
    window, relative = window_membership(index, windows)
    assert set(np.unique(window)) == {0, 1, 2, 3}
    by_window = dict(zip(window, relative, strict=True))
    assert by_window[0] == pytest.approx(0.1) and by_window[1] == pytest.approx(0.2)
    assert by_window[2] == pytest.approx(0.15) and by_window[3] == pytest.approx(0.15)


def test_structural_part_is_the_method_difference_the_parameter_parts_do_not_explain():
    """For independent errors, Var(d) of d = daytime − nighttime is the sum of the
    methods' variances (Bienaymé's formula, GUM §5.1.2 (m)): with specific parts p_day,
    p_night and a common structural s, E[d²] = p_day² + p_night² + 2 s² for GPP and
    for Reco. Both estimate the one s (nighttime GPP = Reco − NEE, NEE has no
    structural error): s = sqrt(max(E_gpp + E_reco, 0) / 4), E = d² − p_day² −
    p_night², the same part in all four partitioned totals."""
    from fluxpart.uncertainty import UncertaintyInputs, period_uncertainty

    index = pd.date_range("2021-06-01", periods=10 * 48, freq="30min")
    n = len(index)
    night = (index.hour < 5) | (index.hour >= 21)
    reco_night, reco_day = np.full(n, 2.0), np.full(n, 2.6)
    fluxes = pd.DataFrame({"nee": np.full(n, -1.0), "reco_nighttime": reco_night,
                           "gpp_nighttime": reco_night + 1.0, "reco_daytime": reco_day,
                           "gpp_daytime": np.where(night, 0.0, 3.1)}, index=index)
    inputs = UncertaintyInputs(
        measured=np.ones(n, dtype=bool), noise_sigma=np.zeros(n), is_night=night,
        fluxes=fluxes, runs={}, gapfill_model=None, e0_delta=np.zeros(n),
        night_window=np.zeros(n, dtype=int), night_relative_se=np.full(n, 0.02),
        day_window=np.zeros(n, dtype=int), day_relative_se=np.full(n, 0.05))
    out = period_uncertainty(inputs, np.zeros(n, dtype=int), 30).iloc[0]
    grams = 1800 * 12.011e-6        # µmol m-2 s-1 over 30 min -> g C m-2
    difference = (reco_day.sum() - reco_night.sum()) * grams
    p_night, p_day = 0.02 * reco_night.sum() * grams, 0.05 * reco_day.sum() * grams
    assert out["reco_nighttime_uncertainty_parameters"] == pytest.approx(p_night)
    assert out["reco_daytime_uncertainty_parameters"] == pytest.approx(p_day)
    gpp_difference = (fluxes["gpp_daytime"].sum() - fluxes["gpp_nighttime"].sum()) * grams
    gpp_parts = [out[f"gpp_{method}_uncertainty_parameters"] for method in ("daytime",
                                                                             "nighttime")]
    assert min(gpp_parts) > 0
    excess = (difference**2 - p_night**2 - p_day**2,
              gpp_difference**2 - gpp_parts[0]**2 - gpp_parts[1]**2)
    expected = np.sqrt(max(sum(excess), 0.0) / 4.0)
    assert expected > 0 and excess[0] != pytest.approx(excess[1])    # pooling matters
    assert out["reco_uncertainty_partitioning"] == pytest.approx(expected)
    assert out["gpp_uncertainty_partitioning"] == pytest.approx(expected)
    assert out["reco_nighttime_uncertainty_total"] == pytest.approx(np.hypot(p_night, expected))
    assert out["gpp_nighttime_uncertainty_total"] == pytest.approx(np.hypot(gpp_parts[1],
                                                                            expected))


def test_structural_sigma_pools_both_fluxes_and_skips_a_missing_one():
    """Nighttime GPP = Reco − NEE record by record (Reichstein et al. 2005), so the
    nighttime method's structural error is one error of both fluxes: the part pools the
    two excesses before the positive part is taken; a flux without sums leaves the
    other's alone (s² = max(E, 0) / 2); none: NaN."""
    from fluxpart.uncertainty import structural_sigma

    gpp = np.array([0.0, -50.0, 40.0, np.nan, np.nan])
    reco = np.array([128.0, 30.0, np.nan, 18.0, np.nan])
    s = structural_sigma(gpp, reco)
    assert s[0] == pytest.approx(np.sqrt(128.0 / 4.0))     # GPP methods agree, Reco's not
    assert s[1] == 0.0                                      # the excesses sum below zero
    assert s[2] == pytest.approx(np.sqrt(40.0 / 2.0))
    assert s[3] == pytest.approx(3.0)
    assert np.isnan(s[4])


def _one_period_with_fills(model):
    """period_uncertainty of one period of 4 days with 23 filled records (5 night, 18 day)
    and no other error, under the gap-filling error model `model`."""
    from fluxpart.uncertainty import UncertaintyInputs, period_uncertainty

    index = pd.date_range("2021-06-01", periods=4 * 48, freq="30min")
    n = len(index)
    measured = np.ones(n, dtype=bool)
    measured[10:30] = measured[100:103] = False                    # 5 night + 18 day
    zeros = np.zeros(n)
    fluxes = pd.DataFrame({name: np.ones(n) for name in (
        "nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")}, index=index)
    inputs = UncertaintyInputs(
        measured=measured, noise_sigma=zeros, is_night=index.hour < 6, fluxes=fluxes, runs={},
        gapfill_model=model, e0_delta=zeros, night_window=np.zeros(n, dtype=int),
        night_relative_se=np.full(n, np.nan), day_window=np.zeros(n, dtype=int),
        day_relative_se=np.full(n, np.nan))
    return period_uncertainty(inputs, np.zeros(n, dtype=int), 30).iloc[0]


@pytest.mark.parametrize("bias, bias_se", [(0.02, 0.005), (0.005, 0.02)])
def test_fill_bias_part_is_the_bias_itself(bias, bias_se):
    """The fill error of N records holds their common bias Nμ; its estimate B has
    E[B²] = (Nμ)² + S² (elementary statistics), so max(B² − S², 0) estimates (Nμ)²
    (the positive-part estimator of a squared mean): a bias resolved by its estimate
    counts nearly whole, one inside its own standard error not at all. S is reported."""

    model = pd.DataFrame({"bias": [bias, bias], "bias_se": [bias_se, bias_se],
                          "independent_variance": [0.0, 0.0], "correlated_variance": [0.0, 0.0]},
                         index=pd.Index(["night", "day"], name="record_class"))
    out = _one_period_with_fills(model)
    grams = 1800 * 12.011e-6
    assert out["nee_uncertainty_gapfill_bias"] == pytest.approx(23 * bias * grams)
    # 5 night and 18 day records: the classes' estimates are independent, so their
    # variances add (Bienaymé's formula, elementary statistics), S = √(5² + 18²) s
    se = np.hypot(5, 18) * bias_se * grams
    assert out["nee_uncertainty_gapfill_bias_se"] == pytest.approx(se)
    squared = max((23 * bias * grams) ** 2 - se ** 2, 0.0)
    assert out["nee_uncertainty_gapfill"] == pytest.approx(np.sqrt(squared))
    assert (out["nee_uncertainty_gapfill"] > 0) == (bias > bias_se)



def test_fill_bias_se_of_a_borrowed_class_is_the_same_estimate():
    """A class without scored gaps takes the other class's bias: one estimate for every
    filled record, so its standard error scales with their count, S = N s (elementary
    statistics: the sum of N copies of one estimate)."""

    model = pd.DataFrame({"bias": [np.nan, 0.02], "bias_se": [np.nan, 0.005],
                          "independent_variance": [np.nan, 0.0],
                          "correlated_variance": [np.nan, 0.0]},
                         index=pd.Index(["night", "day"], name="record_class"))
    out = _one_period_with_fills(model)
    grams = 1800 * 12.011e-6
    assert out["nee_uncertainty_gapfill_bias_se"] == pytest.approx(23 * 0.005 * grams)

def _random_walk_windows(rng, centres_days, drift, relative_se=0.0):
    """Windows whose log Rref follows a random walk of variance `drift` per day."""
    steps = np.diff(centres_days, prepend=centres_days[0])
    log_rref = np.log(2.0) + np.cumsum(rng.normal(0.0, np.sqrt(drift * steps)))
    rref = np.exp(log_rref) * (1.0 + relative_se * rng.standard_normal(centres_days.size))
    start = pd.Timestamp("2021-01-01")
    centres = start + pd.to_timedelta(centres_days, unit="D")
    return pd.DataFrame({"window_start": centres - pd.Timedelta(days=2),
                         "window_end": centres + pd.Timedelta(days=2),
                         "rref": rref, "rref_se": relative_se * rref}), log_rref


def test_interpolation_error_is_the_brownian_bridge_of_the_sites_own_drift():
    """Known truth (invented): log Rref a random walk of variance q per day. The drift
    measured on the windows recovers q, and the stated variance of the linearly
    interpolated value at the middle of a 20-day gap matches the simulated one: the
    Brownian bridge, Var = q (t - c1)(c2 - t) / (c2 - c1) (Ross 1996, Stochastic
    Processes, ch. 8 (m)); checked by simulation, 4000 walks."""
    from fluxpart.uncertainty import interpolation_error

    rng = np.random.default_rng(7)
    drift = 0.004
    centres = np.r_[np.arange(2.0, 100.0, 4.0), np.arange(122.0, 200.0, 4.0)]  # gap 98 -> 122
    index = pd.date_range("2021-01-01", periods=200 * 48, freq="30min")
    estimates = []
    for _ in range(40):
        windows, _ = _random_walk_windows(rng, centres, drift, relative_se=0.05)
        estimates.append(interpolation_error(index, windows)[2])
    assert np.mean(estimates) == pytest.approx(drift, rel=0.15)

    windows, _ = _random_walk_windows(rng, centres, drift)
    interval, sd, _ = interpolation_error(index, windows)
    middle = index.get_loc(pd.Timestamp("2021-04-21 00:00"))        # day 110
    at_centre = index.get_loc(pd.Timestamp("2021-01-11 00:00"))     # day 10: a centre
    assert sd[at_centre] == pytest.approx(0.0, abs=1e-12)
    assert interval[middle] != interval[at_centre]
    # simulated: the walk between c1 = 98 and c2 = 122 at day 110, given both ends
    walks = np.cumsum(rng.normal(0.0, np.sqrt(drift * 0.5), size=(4000, 48)), axis=1)
    truth_mid, end = walks[:, 23], walks[:, 47]                        # 12 and 24 days on
    simulated = np.var(truth_mid - 0.5 * end)
    stated = (sd[middle] ** 2) / interpolation_error(index, windows)[2] * drift
    assert stated == pytest.approx(drift * 12.0 * 12.0 / 24.0, rel=1e-9)
    assert simulated == pytest.approx(drift * 12.0 * 12.0 / 24.0, rel=0.1)


def test_interpolation_error_widens_rref_parameters_across_a_long_gap():
    """The parameter part of annual nighttime Reco grows when three weeks of Rref
    windows are missing (their Rref interpolated), and not counting the interpolation
    (inputs without it) gives the smaller part: the added variance is the bridge's."""
    from dataclasses import replace

    from fluxpart import uncertainty
    from fluxpart.uncertainty import interpolation_error, period_uncertainty

    rng = np.random.default_rng(8)
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    centres = np.r_[np.arange(2.0, 150.0, 4.0), np.arange(174.0, 365.0, 4.0)]
    windows, _ = _random_walk_windows(rng, centres, 0.004, relative_se=0.1)
    reco = np.full(len(index), 2.0)
    fluxes = pd.DataFrame({"nee": reco, "gpp_nighttime": 0.0 * reco,
                           "reco_nighttime": reco, "gpp_daytime": 0.0 * reco,
                           "reco_daytime": reco}, index=index)
    window, relative = uncertainty.window_membership(index, windows)
    interval, spread, drift = interpolation_error(index, windows)
    assert drift > 0
    base = uncertainty.UncertaintyInputs(
        measured=np.ones(len(index), bool), noise_sigma=np.zeros(len(index)),
        is_night=np.ones(len(index), bool), fluxes=fluxes, runs={}, gapfill_model=None,
        e0_delta=np.zeros(len(index)), night_window=window, night_relative_se=relative,
        day_window=window, day_relative_se=relative)
    counted = replace(base, night_interval=interval, night_interpolation_sd=spread)
    keys = np.asarray(index.year)
    without = period_uncertainty(base, keys, 30)["reco_nighttime_uncertainty_parameters"]
    with_gap = period_uncertainty(counted, keys, 30)["reco_nighttime_uncertainty_parameters"]
    factor = 30 * 60 * 12.011e-6
    extra = sum(float(np.sum(spread[interval == i] * 2.0 * factor)) ** 2
                for i in np.unique(interval))
    assert with_gap.iloc[0] ** 2 == pytest.approx(without.iloc[0] ** 2 + extra, rel=1e-9)
    assert with_gap.iloc[0] > without.iloc[0]


def test_interpolation_error_needs_two_windows():
    """With no record, no window or one window there is nothing to interpolate between:
    no group (-1), no error, no drift."""
    from fluxpart.uncertainty import interpolation_error

    windows = pd.DataFrame({"window_start": pd.to_datetime(["2021-01-01", "2021-01-05"]),
                            "window_end": pd.to_datetime(["2021-01-05", "2021-01-09"]),
                            "rref": [1.0, 2.0], "rref_se": [0.1, 0.1]})
    index = pd.date_range("2021-01-01", periods=5, freq="2D")
    for records, table in ((index[:0], windows), (index, windows.iloc[:1]), (index, None)):
        interval, spread, drift = interpolation_error(records, table)
        assert (interval == -1).all() and (spread == 0).all() and drift == 0.0
        assert len(interval) == len(records)
    # centres on days 2 and 6 (records every 2 days from day 0): zero at the centres, the
    # bridge's q * 2 * 2 / 4 halfway, q * 2 beyond the first centre
    interval, spread, drift = interpolation_error(index, windows)
    assert list(interval) == [0, 1, 1, 2, 2]
    assert spread[1] == 0.0 and spread[3] == 0.0
    assert spread[2] == pytest.approx(np.sqrt(drift), rel=1e-12)
    assert spread[0] == pytest.approx(np.sqrt(2.0 * drift), rel=1e-12)


def test_block_ids_cut_runs_into_blocks_from_each_run_start():
    """Runs of True cut into blocks of 3 records from their own start (definition)."""
    from fluxpart.uncertainty import _block_ids

    mask = np.array([0, 1, 1, 1, 1, 0, 1, 1, 1, 1, 1, 1, 1, 0], dtype=bool)
    np.testing.assert_array_equal(_block_ids(mask, 3),
                                  [-1, 0, 0, 0, 1, -1, 2, 2, 2, 3, 3, 3, 4, -1])
    np.testing.assert_array_equal(_block_ids(np.zeros(4, dtype=bool), 3), [-1, -1, -1, -1])


def _neighbour_rows(rng, rounds, covariance, independent=1.0):
    """Artificial-gap rows whose errors share one level per round (covariance per
    record pair `covariance` between any two gaps) plus independent per-record errors."""
    rows = []
    for number in range(rounds):
        level = rng.normal(0.0, np.sqrt(covariance))
        count = rng.integers(1, 12, size=120)
        start = np.sort(rng.uniform(0.0, 365.0, size=120))
        total = level * count + np.sqrt(independent * count) * rng.standard_normal(120)
        rows.append(pd.DataFrame({"round": number, "gap": np.arange(120),
                                  "record_class": "day", "records": count, "length": count,
                                  "error_sum": total, "noise_variance": 0.0, "long": False,
                                  "start_day": start}))
    return pd.concat(rows, ignore_index=True)


def test_neighbour_covariance_recovers_a_shared_error_and_matches_its_definition():
    """Known truth (invented): gap errors share one level per round, so two records of
    different gaps covary by the level's variance c. The moment estimate
    Σ S_g (W_g - S_g) / Σ n_g (M_g - n_g) (gaps within ±7 days; elementary statistics)
    recovers c over 400 rounds, equals its pairwise definition computed gap by gap,
    and is 0 for independent gaps in the mean."""
    from fluxpart.uncertainty import _neighbour_covariance

    rng = np.random.default_rng(11)
    rows = _neighbour_rows(rng, 400, covariance=0.05)
    assert _neighbour_covariance(rows, 0.0) == pytest.approx(0.05, rel=0.25)
    # the definition, pair by pair, on a few rounds
    few = rows[rows["round"] < 3]
    numerator = denominator = 0.0
    for _, one in few.groupby("round"):
        day, s, n = (one[c].to_numpy(float) for c in ("start_day", "error_sum", "records"))
        near = (np.abs(day[:, None] - day[None, :]) <= 7.0) & ~np.eye(day.size, dtype=bool)
        numerator += float(np.sum(np.outer(s, s)[near]))
        denominator += float(np.sum(np.outer(n, n)[near]))
    assert _neighbour_covariance(few, 0.0) == pytest.approx(max(numerator / denominator, 0.0))
    independent = [_neighbour_covariance(_neighbour_rows(rng, 20, 0.0), 0.0)
                   for _ in range(20)]
    assert np.mean(independent) < 0.01           # clipped at 0, small where none is planted
    assert _neighbour_covariance(rows.drop(columns="start_day"), 0.0) == 0.0


def test_long_gaps_get_their_own_shared_variance_by_week_blocks():
    """Known truth (invented): blocks of long artificial gaps with S = sqrt(b_long) m Z1
    + sqrt(a m) Z2 (a from the short gaps) recover b_long; without long rows b_long
    equals the short gaps' b."""
    rng = np.random.default_rng(4)
    short = _neighbour_rows(rng, 30, covariance=0.0).assign(record_class="night")
    m = rng.integers(50, 336, size=3000)
    long_rows = pd.DataFrame({"round": 3, "gap": np.arange(m.size), "record_class": "night",
                              "records": m, "length": 700, "long": True,
                              "error_sum": np.sqrt(0.02) * m * rng.standard_normal(m.size)
                              + np.sqrt(m) * rng.standard_normal(m.size),   # a = 1, as short
                              "noise_variance": 0.0, "start_day": np.nan})
    model = gapfill_error_model(pd.concat([short, long_rows], ignore_index=True))
    row = model.loc["night"]
    assert row["correlated_variance_long"] == pytest.approx(0.02, rel=0.15)
    assert row["long_gap_blocks"] == m.size
    alone = gapfill_error_model(short).loc["night"]
    assert alone["correlated_variance_long"] == alone["correlated_variance"]



def test_long_gap_classes_get_their_own_shared_variance_never_a_longer_ones():
    """Known truth (invented): 7-day blocks of artificial gaps of 3, 14 and 100 days with
    S = sqrt(b_k) m Z1 + sqrt(a m) Z2 recover each length class's b_k (days, weeks,
    months; a gap's error grows with its length, Richardson & Hollinger 2007); a class
    without blocks takes the next shorter class's value; a 100-day gap drawn in a round
    of gaps of every length (``long`` False) leaves the short gaps' b alone once the
    records per day are known. Without them, one pooled long class, as before."""
    rng = np.random.default_rng(5)
    short = _neighbour_rows(rng, 30, covariance=0.0).assign(record_class="night")
    outage = pd.DataFrame({"round": 0, "gap": [999], "record_class": "night",
                           "records": [4000], "length": [4800], "long": False,
                           "error_sum": [4000 * 2.0], "noise_variance": 0.0, "start_day": 1.0})
    frames = []
    for number, (days, planted) in enumerate(((3, 0.01), (14, 0.03), (100, 0.5))):
        m = rng.integers(50, 145 if days == 3 else 336, size=1500)
        frames.append(pd.DataFrame({"round": 12 + number, "gap": np.arange(m.size),
                                    "record_class": "night", "records": m,
                                    "length": days * 48, "long": True,
                                    "error_sum": np.sqrt(planted) * m * rng.standard_normal(m.size)
                                    + np.sqrt(m) * rng.standard_normal(m.size),
                                    "noise_variance": 0.0, "start_day": np.nan}))
    rows = pd.concat([short, outage, *frames], ignore_index=True)
    model = gapfill_error_model(rows, records_per_day=48).loc["night"]
    for column, planted in (("correlated_variance_long", 0.01),
                            ("correlated_variance_weeks", 0.03),
                            ("correlated_variance_months", 0.5)):
        assert model[column] == pytest.approx(planted, rel=0.15), column
    alone = gapfill_error_model(short, records_per_day=48).loc["night"]
    assert model["correlated_variance"] == alone["correlated_variance"]
    assert model["bias"] == alone["bias"]
    no_months = gapfill_error_model(pd.concat([short, *frames[:2]], ignore_index=True),
                                    records_per_day=48).loc["night"]
    assert no_months["correlated_variance_months"] == no_months["correlated_variance_weeks"]
    assert no_months["block_covariance_months"] == no_months["block_covariance_weeks"]
    pooled = gapfill_error_model(rows).loc["night"]
    assert pooled["correlated_variance_long"] == pooled["correlated_variance_months"] \
        == pooled["correlated_variance_weeks"] > 0.1
    assert pooled["correlated_variance"] > 10 * alone["correlated_variance"]

def test_a_record_whose_gaps_all_last_longer_than_a_day_keeps_a_gap_filling_model():
    """Known truth (invented): where the rounds of gaps of every length hold no gap of at
    most a day (every real gap longer), a, b and the bias come from their gaps of every
    length, as without the records per day, and are not left unknown (review61)."""
    rng = np.random.default_rng(6)
    short = _neighbour_rows(rng, 30, covariance=0.0).assign(record_class="night",
                                                              length=480, long=False)
    m = rng.integers(50, 336, size=300)
    long_rows = pd.DataFrame({"round": 12, "gap": np.arange(m.size), "record_class": "night",
                              "records": m, "length": 480, "long": True,
                              "error_sum": np.sqrt(0.02) * m * rng.standard_normal(m.size)
                              + np.sqrt(m) * rng.standard_normal(m.size),
                              "noise_variance": 0.0, "start_day": np.nan})
    rows = pd.concat([short, long_rows], ignore_index=True)
    model = gapfill_error_model(rows, records_per_day=48).loc["night"]
    pooled = gapfill_error_model(rows).loc["night"]
    for column in ("bias", "bias_se", "independent_variance", "correlated_variance"):
        assert np.isfinite(model[column]) and model[column] == pooled[column], column
    assert model["correlated_variance_weeks"] == pytest.approx(0.02, rel=0.3)


def test_artificial_gap_seed_is_fixed_by_the_measured_values_and_their_gaps():
    """The placement seed is a function of the series alone: equal series give equal
    seeds (a copy, another NaN object), a changed value or a moved gap another one, and
    it is a 64-bit unsigned integer (SHA-256, FIPS 180-4, via Python's hashlib)."""
    from fluxpart.uncertainty import artificial_gap_seed

    rng = np.random.default_rng(3)
    nee = rng.normal(0.0, 3.0, 1000)
    nee[100:150] = np.nan
    seed = artificial_gap_seed(nee)
    assert seed == artificial_gap_seed(nee.copy())
    assert 0 <= seed < 2**64
    changed = nee.copy()
    changed[500] += 1e-9
    moved = nee.copy()
    moved[100], moved[150] = moved[150], np.nan
    assert len({seed, artificial_gap_seed(changed), artificial_gap_seed(moved)}) == 3


def test_blocks_of_one_long_gap_share_a_covariance_recovered_by_moments():
    """Known truth (invented): the 7-day blocks of one long artificial gap share a gap
    level of variance d per record pair on top of their own b_long: S_i = sqrt(d) m_i Z_g
    + sqrt(b_long - d) m_i Z_i + sqrt(a m_i) Z'. The moment estimate
    Σ_g (T_g² - Σ S_i²) / Σ_g (M_g² - Σ m_i²) (the covariance of sums of different
    blocks, elementary statistics) recovers d; independent blocks give about 0; rows
    without the ``parent`` column give 0 (blocks then counted independent, as before
    0.13.0)."""
    from fluxpart.uncertainty import _between_block_covariance

    rng = np.random.default_rng(8)

    def rows(d, b_long=0.02, gaps=1500):
        frames = []
        for gap in range(gaps):
            m = np.append(np.full(rng.integers(1, 4), 336), rng.integers(20, 336))
            level = np.sqrt(d) * rng.standard_normal()
            total = (level + np.sqrt(b_long - d) * rng.standard_normal(m.size)) * m \
                + np.sqrt(m) * rng.standard_normal(m.size)
            frames.append(pd.DataFrame({"round": gap % 6, "gap": np.arange(m.size),
                                        "parent": gap, "record_class": "night",
                                        "records": m, "error_sum": total}))
        return pd.concat(frames, ignore_index=True)

    planted = rows(0.012)
    assert _between_block_covariance(planted, 0.0) == pytest.approx(0.012, rel=0.2)
    assert _between_block_covariance(rows(0.0), 0.0) < 0.002
    assert _between_block_covariance(planted.drop(columns="parent"), 0.0) == 0.0
    model = gapfill_error_model(pd.concat([_neighbour_rows(rng, 30, 0.0).assign(
        record_class="night", parent=-1), planted.assign(long=True, noise_variance=0.0,
                                                         length=700, start_day=np.nan)],
        ignore_index=True)).loc["night"]
    assert model["block_covariance_long"] == pytest.approx(0.012, rel=0.2)
    assert model["block_covariance_long"] <= model["correlated_variance_long"]


def test_day_night_correlation_recovers_planted_correlation():
    """Known truth (invented): night and day error sums of each gap share a level with
    correlation rho, S = sqrt(b) m Z. The moment estimate Σ S_n S_d / (Σ m_n m_d
    sqrt(b_n b_d)) recovers rho (0, 0.5, 1; Pearson's correlation of the shared
    levels, elementary statistics), is clipped at 0 for a negative planted one, and
    is 1 without the columns that pair the classes."""
    from fluxpart.uncertainty import _day_night_correlation

    rng = np.random.default_rng(12)
    size = 4000
    m_night, m_day = rng.integers(20, 150, size), rng.integers(20, 150, size)
    b = pd.Series({"night": 0.04, "day": 0.09})
    bias = pd.Series({"night": 0.0, "day": 0.0})
    for rho in (0.0, 0.5, 1.0, -0.6):
        z1 = rng.standard_normal(size)
        z2 = rho * z1 + np.sqrt(1 - rho**2) * rng.standard_normal(size)
        rows = pd.DataFrame({
            "round": 0, "gap": np.r_[np.arange(size), np.arange(size)],
            "record_class": ["night"] * size + ["day"] * size,
            "records": np.r_[m_night, m_day],
            "error_sum": np.r_[0.2 * m_night * z1, 0.3 * m_day * z2]})
        assert _day_night_correlation(rows, bias, b) == pytest.approx(max(rho, 0.0), abs=0.06)
    assert _day_night_correlation(rows.drop(columns="gap"), bias, b) == 1.0


def test_artificial_gaps_start_at_the_time_of_day_of_their_real_gap():
    """Real gaps that all start at 04:00 (the 9th half-hour) give artificial gaps that
    start at 04:00 on other days; without the records per day they start at random
    hours (the placement of 0.14.0). Where the real gaps' hours hold too few measured
    records for a round's share (gaps of one hour), the placement still ends, the rest
    of the gaps at random hours. Invented record: a design property, checked by
    counting."""
    per_day = 48
    n = 60 * per_day
    rng = np.random.default_rng(11)

    def starts_of(length, with_days):
        measured = rng.normal(0.0, 1.0, n)
        for day in range(0, 60, 3):
            measured[day * per_day + 8:day * per_day + 8 + length] = np.nan
        real = np.isnan(measured)
        seen = []

        def fill(values, hidden):
            seen.extend(gap_runs(np.isnan(values) & ~real)[0].tolist())
            return np.where(np.isnan(values), 0.0, values)

        artificial_gap_errors(measured, np.ones(n), np.zeros(n, dtype=bool), fill, seed=2,
                              records_per_day=per_day if with_days else None)
        return np.asarray(seen) % per_day

    matched, spread = starts_of(12, True), starts_of(12, False)
    assert matched.size > 20 and np.mean(matched == 8) > 0.9
    assert np.mean(spread == 8) < 0.2
    crowded = starts_of(2, True)            # 2 h a day cannot hold 10 % of the records
    assert 0.05 < np.mean(crowded == 8) < 0.95


def test_artificial_gaps_copy_the_driver_gaps_of_their_real_gap():
    """Each artificial gap hides, record by record from its start, the conditions its
    real gap lacked: here the one real long gap (2 days) lacked the drivers in its
    first day only, so every artificial long gap hides exactly its own first day,
    and nothing is hidden outside artificial gaps. Long artificial gaps keep their
    own length of measured records on each side of other long gaps."""
    per_day = 48
    n = 60 * per_day
    rng = np.random.default_rng(3)
    measured = rng.normal(0.0, 1.0, n)
    real = slice(20 * per_day, 22 * per_day)
    measured[real] = np.nan
    conditions_missing = np.zeros(n, dtype=bool)
    conditions_missing[20 * per_day:21 * per_day] = True
    conditions_missing[40 * per_day:40 * per_day + 5] = True     # a driver gap, NEE measured
    seen = []

    def fill(values, hidden):
        seen.append((np.isnan(values), hidden.copy()))
        return np.where(np.isnan(values), 0.0, values)

    artificial_gap_errors(measured, np.ones(n), np.zeros(n, dtype=bool), fill, seed=5,
                          records_per_day=per_day, conditions_missing=conditions_missing)
    from fluxpart.uncertainty import _GAP_ROUNDS

    assert len(seen) == 2 * _GAP_ROUNDS          # rounds of all gaps, then of long gaps
    for gaps, hidden in seen:
        assert not (hidden & ~gaps).any()
        assert not hidden[40 * per_day:40 * per_day + 5].any() or gaps[40 * per_day]
    for gaps, hidden in seen[_GAP_ROUNDS:]:
        artificial = gaps.copy()
        artificial[real] = False
        starts, lengths = gap_runs(artificial)
        assert starts.size >= 2
        for start, length in zip(starts, lengths, strict=True):
            assert hidden[start:start + per_day].all()
            assert not hidden[start + per_day:start + length].any()
            assert length == 2 * per_day or start + length == n      # cut at the record's end
            assert not gaps[max(start - length, 0):start].any()      # clear of other gaps


def _filled_inputs(index, measured, model):
    """UncertaintyInputs with NEE = 1 everywhere, no other part."""
    from fluxpart.uncertainty import UncertaintyInputs

    n = len(index)
    zeros = np.zeros(n)
    fluxes = pd.DataFrame({name: np.ones(n) for name in (
        "nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")}, index=index)
    return UncertaintyInputs(
        measured=measured, noise_sigma=zeros, is_night=np.zeros(n, dtype=bool), fluxes=fluxes,
        runs={}, gapfill_model=model, e0_delta=zeros, night_window=np.zeros(n, dtype=int),
        night_relative_se=np.full(n, np.nan), day_window=np.zeros(n, dtype=int),
        day_relative_se=np.full(n, np.nan))


def _error_model(**columns):
    """A gap-filling error model (night, day rows) with zero bias and variances, plus
    `columns` given as [night, day] values."""
    zeros = {name: [0.0, 0.0] for name in ("bias", "bias_se", "independent_variance",
                                           "correlated_variance")}
    return pd.DataFrame({**zeros, **columns},
                        index=pd.Index(["night", "day"], name="record_class"))


def test_period_gapfill_part_counts_neighbour_pairs_and_week_blocks():
    """Var(Σ errors) = Σ_i Σ_j cov(i, j) (elementary statistics): two one-record gaps 3
    days apart add 2c (the pair in both orders), none 10 days apart or across periods;
    a 10-day gap (30-min records) shares b_long within a 7-day block and the rest:
    b_long (336² + 144²)."""
    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=40 * 48, freq="30min")
    n = len(index)
    model = _error_model(correlated_variance_long=[0.0, 0.0], neighbour_covariance=[0.3, 0.3])
    grams = 1800 * 12.011e-6
    measured = np.ones(n, dtype=bool)
    measured[[100, 100 + 3 * 48, 100 + 13 * 48]] = False   # 0 and 3 days apart; 10 days on
    out = period_uncertainty(_filled_inputs(index, measured, model), np.zeros(n, int), 30)
    assert out["nee_uncertainty_gapfill"].iloc[0] == pytest.approx(np.sqrt(2 * 0.3) * grams)
    by_day = period_uncertainty(_filled_inputs(index, measured, model),
                                index.normalize(), 30)
    assert (by_day["nee_uncertainty_gapfill"] == 0).all()   # each day holds one filled record
    long_model = model.assign(neighbour_covariance=0.0, correlated_variance_long=0.01)
    measured = np.ones(n, dtype=bool)
    measured[200:200 + 480] = False
    out = period_uncertainty(_filled_inputs(index, measured, long_model), np.zeros(n, int), 30)
    assert out["nee_uncertainty_gapfill"].iloc[0] == pytest.approx(
        np.sqrt(0.01 * (336**2 + 144**2)) * grams)


def test_period_gapfill_part_adds_the_covariance_of_different_blocks_of_one_gap():
    """Var(Σ_i S_i) = Σ_i Var S_i + Σ_{i≠j} cov(S_i, S_j) (elementary statistics): a
    20-day gap of 30-min records is cut into 7-day blocks of 336, 336 and 288 records;
    with b_long per record pair within a block and d between blocks, the shared
    variance is b_long Σ m_i² + d ((Σ m_i)² - Σ m_i²). A gap of a day or less, a single
    block, takes none of d."""
    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=40 * 48, freq="30min")
    n = len(index)
    grams = 1800 * 12.011e-6
    model = _error_model(correlated_variance_long=[0.01, 0.01], neighbour_covariance=[0.0, 0.0],
                         block_covariance_long=[0.004, 0.004])
    measured = np.ones(n, dtype=bool)
    measured[100:100 + 960] = False
    out = period_uncertainty(_filled_inputs(index, measured, model), np.zeros(n, int), 30)
    blocks = np.array([336.0, 336.0, 288.0])
    shared = 0.01 * np.sum(blocks**2) + 0.004 * (blocks.sum() ** 2 - np.sum(blocks**2))
    assert out["nee_uncertainty_gapfill"].iloc[0] == pytest.approx(np.sqrt(shared) * grams,
                                                                     rel=1e-12)
    short = np.ones(n, dtype=bool)
    short[100:140] = False
    alone = period_uncertainty(_filled_inputs(index, short, model.assign(
        block_covariance_long=0.0)), np.zeros(n, int), 30)
    assert period_uncertainty(_filled_inputs(index, short, model), np.zeros(n, int), 30)[
        "nee_uncertainty_gapfill"].iloc[0] == alone["nee_uncertainty_gapfill"].iloc[0]



def test_period_gapfill_part_takes_the_length_class_of_each_gap():
    """Var(Σ errors) = Σ_i Σ_j cov(i, j) (elementary statistics): a 10-day gap (a weeks
    gap, 30-min records) shares the weeks class's b and d over its blocks of 336 and
    144 records, a 3-day gap (one block of 144) the days class's b; a model without
    the weeks and months columns (before gaplength50) gives every long gap its one
    long class."""
    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=40 * 48, freq="30min")
    n = len(index)
    grams = 1800 * 12.011e-6
    model = _error_model(correlated_variance_long=[0.01, 0.01],
                         block_covariance_long=[0.0, 0.0],
                         correlated_variance_weeks=[0.04, 0.04],
                         block_covariance_weeks=[0.02, 0.02],
                         correlated_variance_months=[0.5, 0.5],
                         block_covariance_months=[0.3, 0.3], neighbour_covariance=[0.0, 0.0])
    weeks = np.ones(n, dtype=bool)
    weeks[100:100 + 480] = False
    days = np.ones(n, dtype=bool)
    days[100:100 + 144] = False
    blocks = np.array([336.0, 144.0])
    expected = {
        "weeks": 0.04 * np.sum(blocks**2) + 0.02 * (blocks.sum()**2 - np.sum(blocks**2)),
        "days": 0.01 * 144.0**2}
    for name, measured in (("weeks", weeks), ("days", days)):
        out = period_uncertainty(_filled_inputs(index, measured, model), np.zeros(n, int), 30)
        assert out["nee_uncertainty_gapfill"].iloc[0] == pytest.approx(
            np.sqrt(expected[name]) * grams, rel=1e-12), name
    old = model.drop(columns=[c for c in model if c.endswith(("_weeks", "_months"))])
    out = period_uncertainty(_filled_inputs(index, weeks, old), np.zeros(n, int), 30)
    assert out["nee_uncertainty_gapfill"].iloc[0] == pytest.approx(
        np.sqrt(0.01 * np.sum(blocks**2)) * grams, rel=1e-12)

def test_long_gap_shared_error_grows_with_the_size_of_its_fills_not_below_typical():
    """Var(c Σ e) = c² Var(Σ e) (elementary statistics): in a 5-day gap (one block of
    240 records) whose fills are 3 times the class's typical |NEE| r, each record
    counts 3 in the shared part, so its standard deviation triples; fills smaller
    than r count 1 (the floor), as do gaps of a day or less."""
    from dataclasses import replace

    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=20 * 48, freq="30min")
    n = len(index)
    grams = 1800 * 12.011e-6
    model = _error_model(correlated_variance_long=[0.01, 0.01], neighbour_covariance=[0.0, 0.0],
                         size_reference_long=[2.0, 2.0])
    measured = np.ones(n, dtype=bool)
    measured[100:100 + 240] = False

    def sigma(fill, mask=measured):
        inputs = _filled_inputs(index, mask, model)
        fluxes = inputs.fluxes.assign(nee=fill)
        out = period_uncertainty(replace(inputs, fluxes=fluxes), np.zeros(n, int), 30)
        return out["nee_uncertainty_gapfill"].iloc[0]

    plain = np.sqrt(0.01) * 240 * grams
    assert sigma(np.full(n, -6.0)) == pytest.approx(3 * plain, rel=1e-12)
    assert sigma(np.full(n, 0.5)) == pytest.approx(plain, rel=1e-12)
    short = np.ones(n, dtype=bool)
    short[100:120] = False
    assert sigma(np.full(n, -6.0), short) == sigma(np.full(n, 0.5), short)


def test_artificial_gaps_count_records_by_the_size_of_their_fills():
    """size_records = Σ max(|fill| / r, 1) over a row's scored records, r the class's
    mean |NEE| over its measured records (the definition; arithmetic checked by hand
    on a constant series: |NEE| 2 measured, fills of 6 count 3 each)."""
    n = 2000
    nee = np.full(n, 2.0)
    nee[500:700] = np.nan                                  # a real 200-record gap
    night = np.zeros(n, dtype=bool)
    rows = artificial_gap_errors(nee, np.zeros(n), night, lambda values, hidden: np.where(
        np.isfinite(values), values, 6.0), seed=2, records_per_day=48)
    assert (rows["size_reference"] == 2.0).all()
    np.testing.assert_allclose(rows["size_records"], 3.0 * rows["records"])


def test_period_gapfill_part_shares_night_and_day_errors_by_their_correlation():
    """Var(S_n + S_d) = Var S_n + Var S_d + 2 rho sd_n sd_d (elementary statistics): a
    7-day gap (one block) of 168 night and 168 day records with b_long 0.01 (night) and
    0.04 (day) has shared variance 168² (0.01 + 0.04 + 2 rho 0.02); a model table
    without the correlation columns (before 0.9.0) counts them fully shared."""
    from dataclasses import replace

    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=30 * 48, freq="30min")
    n = len(index)
    measured = np.ones(n, dtype=bool)
    measured[480:480 + 336] = False
    night = (np.arange(n) % 48) < 24
    model = _error_model(correlated_variance_long=[0.01, 0.04], neighbour_covariance=[0.0, 0.0])
    grams = 1800 * 12.011e-6
    for rho in (0.0, 0.5, 1.0):
        inputs = replace(_filled_inputs(index, measured, model.assign(
            day_night_correlation=1.0, day_night_correlation_long=rho)), is_night=night)
        out = period_uncertainty(inputs, np.zeros(n, int), 30)["nee_uncertainty_gapfill"]
        assert out.iloc[0] == pytest.approx(
            168 * np.sqrt(0.01 + 0.04 + 2 * rho * 0.02) * grams, rel=1e-12)
    old = period_uncertainty(replace(_filled_inputs(index, measured, model), is_night=night),
                             np.zeros(n, int), 30)["nee_uncertainty_gapfill"]
    assert old.iloc[0] == pytest.approx(168 * np.sqrt(0.09) * grams, rel=1e-12)


def test_fill_covaries_with_the_measured_records_it_averages():
    """A fill is the mean of k donors of error variance σ², so cov(fill, Σ donors) = σ²
    (elementary statistics) and Var(measured + filled) gains 2σ² per fill, times the
    share of its donor window inside the period: a fill mid-period counts whole, one
    half a day after a period's start (±7-day window) 7.5 / 14 of it. The donors are
    measured records, so at the record's own start the window ends there: a fill half
    a day into the record, its period starting with the record, counts whole."""
    from dataclasses import replace

    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=40 * 48, freq="30min")
    n = len(index)
    measured = np.ones(n, dtype=bool)
    measured[[24, 20 * 48 + 24, 30 * 48]] = False
    keys = (np.arange(n) >= 20 * 48).astype(int)          # days 0-19 and 20-39
    model = _error_model()
    inputs = replace(_filled_inputs(index, measured, model),
                     fill_window_days=np.where(measured, np.nan, 14.0),
                     fill_noise_sigma=np.full(n, 2.0))
    out = period_uncertainty(inputs, keys, 30)["nee_uncertainty_gapfill"]
    grams = 1800 * 12.011e-6
    assert out.loc[0] == pytest.approx(np.sqrt(2.0 * 4.0) * grams)
    assert out.loc[1] == pytest.approx(np.sqrt(2.0 * 4.0 * (7.5 / 14.0 + 1.0)) * grams)
    without = period_uncertainty(replace(inputs, fill_noise_sigma=None), keys, 30)
    assert (without["nee_uncertainty_gapfill"] == 0.0).all()


def test_period_gapfill_part_without_filled_records_is_zero():
    """A period without filled records has no gap-filling error: Var(Σ over no fills) = 0
    (elementary statistics), whatever the error model; before, the gap-length count of an
    input without fills raised IndexError."""
    from fluxpart.uncertainty import period_uncertainty

    index = pd.date_range("2021-06-01", periods=4 * 48, freq="30min")
    n = len(index)
    model = pd.DataFrame({"bias": [0.1, 0.1], "bias_se": [0.05, 0.05],
                          "independent_variance": [0.2, 0.2], "correlated_variance": [0.01, 0.01]},
                         index=pd.Index(["night", "day"], name="record_class"))
    out = period_uncertainty(_filled_inputs(index, np.ones(n, dtype=bool), model),
                             index.normalize(), 30)
    assert (out["nee_uncertainty_gapfill"] == 0.0).all()
    assert (out["nee_uncertainty_gapfill_bias"] == 0.0).all()


def test_fill_of_unknown_donor_window_adds_no_donor_covariance():
    """_donor_noise's stated rule: 0 where the fill's window is unknown (NaN). Before, a
    NaN window was read as one record wide and counted σ² whole (2σ² to the variance)."""
    from dataclasses import replace

    from fluxpart.uncertainty import _donor_noise

    index = pd.date_range("2021-06-01", periods=40 * 48, freq="30min")
    n = len(index)
    measured = np.ones(n, dtype=bool)
    measured[[10 * 48, 20 * 48]] = False
    window = np.where(measured, np.nan, 14.0)
    window[20 * 48] = np.nan
    inputs = replace(_filled_inputs(index, measured, None), fill_window_days=window,
                     fill_noise_sigma=np.full(n, 2.0))
    donors = _donor_noise(inputs, np.zeros(n, dtype=int), ~measured, 30)
    assert donors[10 * 48] == pytest.approx(4.0)      # σ² = 2², the window wholly inside
    assert donors[20 * 48] == 0.0


def test_gapfill_model_with_unknown_noise_subtracts_nothing():
    """Without a random-error model the scored noise variance is NaN. E[(S - bias n)²] =
    fill variance + noise variance (elementary statistics), so with the noise unknown a
    and b are fitted to the whole (an upper bound), not left NaN; a NaN a and b_long used
    to drop out of the period's gap-filling part as if they were 0."""
    rng = np.random.default_rng(2)
    short = _neighbour_rows(rng, 30, covariance=0.0).assign(noise_variance=np.nan)
    long_rows = short.iloc[:40].assign(long=True, records=200, error_sum=30.0 * rng.standard_normal(40))
    rows = pd.concat([short, long_rows], ignore_index=True)
    unknown = gapfill_error_model(rows).loc["day"]
    zero = gapfill_error_model(rows.assign(noise_variance=0.0)).loc["day"]
    for column in ("independent_variance", "correlated_variance", "correlated_variance_long"):
        assert np.isfinite(unknown[column])
        assert unknown[column] == zero[column]
    assert unknown["independent_variance"] == pytest.approx(1.0, rel=0.2)   # planted a = 1


def test_window_parts_stay_within_the_pieces_between_events():
    """Declared events (Config.events, breaks): the methods take a record's parameters
    from the windows of its own piece only (fluxpart.partition.pieces), so its window
    parts do too. Invented windows: Rref 3.0, 3.1, 3.0 before an event on day 11 and
    1.0, 1.05, 1.0 after it. The harvest's jump ln(3) is no drift of the random walk:
    with the breaks the drift is the within-piece pairs' (computed here by its formula,
    Σ(Δ ln)² − Σ(r1² + r2²) over Σ Δt), without them the jump inflates it. Beyond its
    piece's last centre a record's variance is the random walk's from that centre,
    q |t − c| (the Brownian bridge's end, Ross 1996 ch. 8 (m)), a stretch of its own; and
    a record just after the event counts the first window after it as its own, though
    the last one before it is nearer."""
    from fluxpart.uncertainty import interpolation_error, window_membership

    starts = pd.to_datetime(["2021-01-01", "2021-01-05", "2021-01-09", "2021-01-12",
                             "2021-01-16", "2021-01-20"])
    ends = pd.to_datetime(["2021-01-05", "2021-01-09", "2021-01-12", "2021-01-16",
                           "2021-01-20", "2021-01-24"])
    rref = np.array([3.0, 3.1, 3.0, 1.0, 1.05, 1.0])
    windows = pd.DataFrame({"window_start": starts, "window_end": ends, "rref": rref,
                            "rref_se": 0.01 * rref})
    index = pd.date_range("2021-01-01", periods=23 * 24, freq="h")
    breaks = np.array([index.get_loc(pd.Timestamp("2021-01-12"))])
    centres = ((starts - index[0]) / pd.Timedelta(days=1)).to_numpy() + (
        (ends - starts) / pd.Timedelta(days=1)).to_numpy() / 2
    pairs = [0, 1, 3, 4]                                   # neighbours on one side
    log_steps = np.diff(np.log(rref))[pairs]
    expected = (np.sum(log_steps ** 2) - len(pairs) * 2 * 0.01 ** 2) / np.sum(
        np.diff(centres)[pairs])
    interval, sd, drift = interpolation_error(index, windows, breaks=breaks)
    assert drift == pytest.approx(expected, rel=1e-12)
    assert interpolation_error(index, windows)[2] > 20 * drift
    late = index.get_loc(pd.Timestamp("2021-01-11 18:00"))     # 1.25 days after centre 9.5
    assert sd[late] ** 2 == pytest.approx(drift * 1.25, rel=1e-12)
    after = index.get_loc(pd.Timestamp("2021-01-12 04:00"))    # before the first centre after
    assert interval[late] != interval[after]
    assert sd[after] ** 2 == pytest.approx(drift * (centres[3] - 11 - 4 / 24), rel=1e-12)
    nearest, _ = window_membership(index, windows)
    own, _ = window_membership(index, windows, breaks=breaks)
    assert nearest[after] == 2 and own[after] == 3
    np.testing.assert_array_equal(own[:breaks[0]], nearest[:breaks[0]])
    # without events: the same arrays as before, bit for bit
    for none in (None, []):
        for got, plain in zip(interpolation_error(index, windows, breaks=none),
                              interpolation_error(index, windows), strict=True):
            np.testing.assert_array_equal(got, plain)


def test_effective_records_follows_the_ar1_variance_inflation():
    """Known truth: an AR(1) series of lag-1 correlation 0.6 carries the information of
    n (1 - 0.6)/(1 + 0.6) = n / 4 independent records (Wilks 2011, section 5.2.4 (m));
    the lag-1 autocorrelation is checked against statsmodels' ``acf``, a general-purpose
    reference; white noise keeps all n; a negative correlation counts as none."""
    from statsmodels.tsa.stattools import acf

    from fluxpart.uncertainty import effective_records

    rng = np.random.default_rng(7)
    n = 20000
    shocks = rng.standard_normal(n)
    series = np.empty(n)
    series[0] = shocks[0]
    for i in range(1, n):
        series[i] = 0.6 * series[i - 1] + np.sqrt(1 - 0.36) * shocks[i]
    use = np.ones(n, dtype=bool)
    rho = acf(series, nlags=1, fft=True)[1]
    assert effective_records(series, use) == pytest.approx(n * (1 - rho) / (1 + rho), rel=0.02)
    assert effective_records(series, use) == pytest.approx(n / 4, rel=0.08)
    assert effective_records(shocks, use) == pytest.approx(n, rel=0.03)
    alternating = np.where(np.arange(n) % 2 == 0, 1.0, -1.0) + 0.1 * shocks
    assert effective_records(alternating, use) == n
    # only neighbours that are both used form pairs: every other record used, no pairs
    sparse = np.arange(n) % 2 == 0
    assert effective_records(series, sparse) == sparse.sum()
    # never below 2 nor above the records used
    assert effective_records(np.cumsum(shocks), use) >= 2


def test_hidden_drivers_match_pandas_mask():
    """An artificial gap's hidden drivers: cell for cell pandas' ``DataFrame.mask`` (the
    general-purpose reference), each column a contiguous float64 array; None: unchanged."""
    from fluxpart.uncertainty_assembly import with_hidden

    rng = np.random.default_rng(49)
    index = pd.date_range("2021-01-01", periods=500, freq="30min")
    conditions = pd.DataFrame(rng.normal(size=(500, 4)), index=index,
                              columns=["rg", "tair", "vpd", "tsoil"])
    conditions.iloc[rng.integers(0, 500, 40), 2] = np.nan      # a driver's own gaps
    conditions["rg"] = conditions["rg"].to_numpy() * 100.0     # a second block
    hidden = rng.random((500, 4)) < 0.2
    before = conditions.copy()
    got = with_hidden(conditions, hidden)
    expected = conditions.mask(hidden)
    pd.testing.assert_frame_equal(got, expected)
    assert all(got[name].to_numpy().flags.c_contiguous for name in got.columns)
    pd.testing.assert_frame_equal(conditions, before)           # the input untouched
    assert with_hidden(conditions, None) is conditions


def test_held_out_records_are_counted_once_where_artificial_gaps_overlap():
    """The records a draw of artificial gaps newly holds out (round speed55: counted draw by
    draw) are those a whole-record count finds added, overlaps and the record's end
    included, a gap inside another too (round speed59: counted over the union of the spans)
    (a count of set members; invented masks)."""
    from fluxpart.uncertainty import _hold_out

    rng = np.random.default_rng(55)
    n = 500
    measured = rng.random(n) < 0.6
    mask = np.zeros(n, dtype=bool)
    for _ in range(20):
        lengths = rng.integers(1, 30, size=8)
        starts = rng.integers(0, n, size=8)
        starts[:2] = starts[0]                      # two gaps over the same records
        lengths[2], starts[3], lengths[3] = 10, starts[2] + 2, 3    # one inside another
        before = int((mask & measured).sum())
        added = _hold_out(mask, None, None, starts, lengths, starts, measured)
        assert added == int((mask & measured).sum()) - before
