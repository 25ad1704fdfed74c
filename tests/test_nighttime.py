"""Tests of fluxpart.partition.nighttime (Reichstein et al. 2005; Lloyd & Taylor 1994).

External checks: SciPy's ``curve_fit`` and statsmodels' ``OLS`` fitting the same
model to the same points; SciPy's ``linprog`` (HiGHS) solving the least absolute
deviation fit of the joint E0 as a linear programme. Known-truth recovery tests use invented data (planted
E0 and Rref plus noise), the only place invented data is used here.
"""

import dataclasses

import numpy as np
import pandas as pd
import pytest
import scipy
import statsmodels
import statsmodels.api as sm
from scipy.optimize import curve_fit, linprog

from fluxpart.config import Config
from fluxpart.errors import (
    ConfigError,
    FluxpartError,
    ImplausibleValueError,
    InsufficientDataError,
)
from fluxpart.partition.dark_nights import fit_mask
from fluxpart.partition.nighttime import (
    NighttimeResult,
    annual_e0,
    apply_fit,
    fit_e0_joint,
    fit_e0_windows,
    fit_rref_windows,
    partition_nighttime,
    rref_per_record,
)


# --------------------------------------------------------------------------- #
# Invented known-truth data (only for recovery tests and as fitting input)
# --------------------------------------------------------------------------- #
def _eq11(temperature_celsius, rref, e0):
    """Lloyd & Taylor (1994) eq. 11, written out independently of fluxpart."""
    kelvin = np.asarray(temperature_celsius) + 273.15
    return rref * np.exp(e0 * (1.0 / (283.15 - 227.13) - 1.0 / (kelvin - 227.13)))


def _synthetic(rng, start="2021-01-01", end="2021-12-31 23:30", freq="30min", e0=220.0,
               rref=None, noise=0.25, measured_fraction=0.6, temperature=None):
    """Invented night respiration with planted E0 and Rref, plus Gaussian noise.

    Returns index, measured NEE (NaN where 'not measured'), filled NEE (truth +
    noise everywhere, day uptake included), temperature, night mask, true Reco.
    """
    index = pd.date_range(start, end, freq=freq)
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    if temperature is None:
        weather = pd.Series(rng.normal(0.0, 1.0, len(index))).rolling(
            int(3 * 1440 / pd.Timedelta(freq).total_seconds() * 60), min_periods=1).mean()
        temperature = (8.0 - 10.0 * np.cos(2 * np.pi * (days - 20.0) / 365.25)
                       + 4.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
                       + 20.0 * weather.to_numpy())
    is_night = (hour < 6.0) | (hour >= 19.0)
    if rref is None:
        rref = 2.0 + 1.0 * np.sin(2 * np.pi * (days - 100.0) / 365.25)
    e0_record = np.broadcast_to(np.asarray(e0, dtype=float), index.shape)
    reco = _eq11(temperature, rref, e0_record)
    uptake = np.where(is_night, 0.0, 8.0 * np.clip(np.sin(np.pi * (hour - 6.0) / 13.0), 0, None))
    nee_filled = reco - uptake + rng.normal(0.0, noise, len(index))
    measured = is_night & (rng.random(len(index)) < measured_fraction)
    nee_measured = np.where(measured, nee_filled, np.nan)
    return index, nee_measured, nee_filled, np.asarray(temperature, dtype=float), is_night, reco


def _config_settings():
    """The keyword arguments the pipeline passes, taken from Config() by name."""
    config = Config()
    names = [f.name for f in dataclasses.fields(Config)
             if f.name.startswith(("e0_", "rref_")) or f.name == "respiration_driver"]
    settings = {name: getattr(config, name) for name in names}
    # the pipeline resolves "auto" to the temperature the night data favour
    if settings["respiration_driver"] == "auto":
        settings["respiration_driver"] = "tair"
    return settings


# --------------------------------------------------------------------------- #
# E0 windows against SciPy
# --------------------------------------------------------------------------- #
def test_single_window_fit_matches_scipy_curve_fit(rng):
    """One window's (Rref, E0) and standard errors equal SciPy's curve_fit on the same points."""
    # exactly one 15-day window: the record starts at noon and lasts 15 days
    index, nee, _, temperature, night, _ = _synthetic(
        rng, start="2021-05-01 12:00", end="2021-05-16 11:30", e0=180.0, rref=2.2, noise=0.3)
    windows = fit_e0_windows(index, nee, temperature, night)
    assert len(windows) == 1
    window = windows.iloc[0]
    usable = night & np.isfinite(nee)
    # SciPy 1.17 (the tested version is printed on failure): scipy.optimize.curve_fit(
    # model, T, NEE, p0=(1, 300)), default method "lm" (MINPACK), absolute_sigma=False,
    # so pcov = s² (JᵀJ)⁻¹ with s² = SSR/(n - 2), the same estimator as ours.
    params, covariance = curve_fit(_eq11, temperature[usable], nee[usable], p0=(1.0, 300.0))
    errors = np.sqrt(np.diag(covariance))
    message = f"scipy {scipy.__version__}"
    assert window["points"] == usable.sum()
    # 1e-4 relative: both stop at convergence tolerances far below that
    assert window["rref"] == pytest.approx(params[0], rel=1e-4), message
    assert window["e0"] == pytest.approx(params[1], rel=1e-4), message
    # 1 %: standard errors from the Jacobian at slightly different stopping points
    assert window["rref_se"] == pytest.approx(errors[0], rel=0.01), message
    assert window["e0_se"] == pytest.approx(errors[1], rel=0.01), message
    assert bool(window["accepted"]) and window["reason"] == ""


def test_every_window_of_a_year_matches_scipy(rng):
    """All fitted windows of a site-year agree with curve_fit window by window."""
    index, nee, _, temperature, night, _ = _synthetic(rng)
    windows = fit_e0_windows(index, nee, temperature, night)
    usable = night & np.isfinite(nee)
    for _, window in windows.iloc[::7].iterrows():
        inside = usable & (index >= window["window_start"]) & (index < window["window_end"])
        # SciPy: scipy.optimize.curve_fit(model, T, NEE, p0=(1, 300)), method "lm"
        params, covariance = curve_fit(_eq11, temperature[inside], nee[inside],
                                       p0=(1.0, 300.0))
        assert window["points"] == inside.sum()
        assert window["e0"] == pytest.approx(params[1], rel=1e-4)
        assert window["rref"] == pytest.approx(params[0], rel=1e-4)
        assert window["e0_se"] == pytest.approx(np.sqrt(covariance[1, 1]), rel=0.01)


# --------------------------------------------------------------------------- #
# Joint E0 (one E0, a free Rref per window)
# --------------------------------------------------------------------------- #
def test_joint_e0_is_the_least_absolute_deviation_fit(rng):
    """The profile fit equals SciPy's linear-programming LAD fit at and around its E0.

    For a fixed E0 the model is linear in the windows' Rref, so the least
    absolute deviation fit is a linear programme; SciPy's HiGHS solver gives its
    exact optimum. Our E0 must have the smallest optimum of its neighbours.
    """
    index, nee, _, temperature, night, _ = _synthetic(
        rng, start="2021-04-01 12:00", end="2021-05-31 11:30", e0=200.0, noise=0.3)
    nee = np.where(np.arange(len(nee)) % 3 == 0, nee, np.nan)   # keep the programme small
    joint = fit_e0_joint(index, nee, temperature, night)
    usable = night & np.isfinite(nee)
    days = np.asarray((index - pd.Timestamp("2021-04-01 12:00")) / pd.Timedelta(days=1))
    window = np.floor(days[usable] / 15.0).astype(int)
    t, y = temperature[usable], nee[usable]
    n_windows, n = window.max() + 1, y.size

    def lad_optimum(e0):
        # SciPy: scipy.optimize.linprog(method="highs"); variables Rref_w >= 0 and the
        # positive and negative parts of each residual: min Σ(u+ + u-) s.t. F Rref + u+ - u- = y
        shape = _eq11(t, 1.0, e0)   # Lloyd & Taylor (1994) eq. 11 at Rref = 1
        design = np.zeros((n, n_windows))
        design[np.arange(n), window] = shape
        equality = np.hstack([design, np.eye(n), -np.eye(n)])
        cost = np.r_[np.zeros(n_windows), np.ones(2 * n)]
        return linprog(cost, A_eq=equality, b_eq=y, bounds=(0, None), method="highs").fun

    row = joint.loc[2021]
    assert row["windows"] == n_windows and row["points"] == n
    assert bool(row["accepted"]) and row["reason"] == ""
    at_estimate = lad_optimum(row["e0"])
    message = f"scipy {scipy.__version__}"
    assert at_estimate <= lad_optimum(row["e0"] - 1.0) + 1e-9, message
    assert at_estimate <= lad_optimum(row["e0"] + 1.0) + 1e-9, message
    # known truth, planted E0 = 200 K, within three of its standard errors
    assert abs(row["e0"] - 200.0) < 3.0 * row["e0_se"], (row["e0"], row["e0_se"])


def test_joint_e0_unbiased_where_rref_follows_the_season(rng):
    """Known truth: Rref rising with temperature through spring does not leak into E0.

    Rref (1 to 3) rises through spring with temperature, so a single window's fit mixes
    the seasonal rise into E0 (the confounding Reichstein et al. 2005 used short
    windows against); the joint fit reads E0 from within-window variation only.
    """
    index, nee, filled, temperature, night, reco = _synthetic(rng, e0=180.0, noise=0.3)
    joint = fit_e0_joint(index, nee, temperature, night)
    assert joint.loc[2021, "e0"] == pytest.approx(180.0, rel=0.08)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night)
    assert result.e0_annual.loc[2021, "source"] == "joint"
    assert result.reco.sum() == pytest.approx(reco.sum(), rel=0.03)


def test_joint_e0_not_accepted_falls_back_to_windows(rng):
    """A year whose joint E0 lands on a bound falls back (windows, then e0_fallback)."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, e0=220.0, noise=0.2)
    joint = fit_e0_joint(index, nee, temperature, night, e0_bounds=(30.0, 120.0))
    assert not joint.loc[2021, "accepted"] and "bound" in joint.loc[2021, "reason"]
    # every short window is outside the bounds too, so the flagged fall-back applies
    result = partition_nighttime(index, nee, filled, temperature, temperature, night,
                                 e0_bounds=(30.0, 120.0), e0_fallback=100.0)
    assert result.e0_annual.loc[2021, "source"] == "fallback"
    assert result.e0_annual.loc[2021, "e0"] == 100.0
    # with the windows' estimate chosen outright, the joint fit is not consulted
    windows_only = partition_nighttime(index, nee, filled, temperature, temperature, night,
                                       e0_method="best_windows")
    assert windows_only.e0_annual.loc[2021, "source"] == "fitted"


def test_e0_window_layout_and_columns(rng):
    """15-day windows every 5 days from local noon; a 365-day year gives ~71 windows."""
    index, nee, _, temperature, night, _ = _synthetic(rng)
    windows = fit_e0_windows(index, nee, temperature, night)
    assert list(windows.columns) == ["window_start", "window_end", "window_centre", "year",
                                     "points", "temperature_range", "e0", "e0_se", "rref",
                                     "rref_se", "accepted", "reason"]
    assert 70 <= len(windows) <= 73
    assert windows["window_start"].iloc[0] == pd.Timestamp("2020-12-31 12:00")
    steps = windows["window_start"].diff().dropna().unique()
    assert list(steps) == [pd.Timedelta(days=5)]
    assert ((windows["window_end"] - windows["window_start"]) == pd.Timedelta(days=15)).all()
    assert (windows["year"] == windows["window_centre"].dt.year).all()
    assert windows["window_end"].iloc[-1] >= index[-1]


# --------------------------------------------------------------------------- #
# Known-truth recovery (invented data)
# --------------------------------------------------------------------------- #
def test_recovers_planted_e0_and_reco(rng):
    """Planted E0 = 220 K and a seasonal Rref are recovered from noisy night data."""
    index, nee, filled, temperature, night, reco_true = _synthetic(rng, e0=220.0)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night)
    assert isinstance(result, NighttimeResult)
    e0 = result.e0_annual.loc[2021, "e0"]
    # best-three-windows mean: each window's se is ~10-20 K at this noise, and
    # picking the smallest se favours some windows, so allow 10 %
    assert e0 == pytest.approx(220.0, rel=0.10)
    accepted = result.e0_windows[result.e0_windows["accepted"]]
    assert accepted["e0"].median() == pytest.approx(220.0, rel=0.05)
    # annual Reco within 3 % of the truth, the point of the method
    assert result.reco.sum() == pytest.approx(reco_true.sum(), rel=0.03)
    np.testing.assert_allclose(result.gpp, result.reco - filled, rtol=0, atol=0)
    assert result.e0_annual.loc[2021, "source"] == "joint"


def test_recovers_seasonal_rref(rng):
    """4-day Rref windows follow a planted seasonal Rref within 10 % (median)."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, e0=220.0, noise=0.15)
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    rref_true = 2.0 + 1.0 * np.sin(2 * np.pi * (days - 100.0) / 365.25)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night,
                                 **_config_settings())
    relative = np.abs(result.rref / rref_true - 1.0)
    assert np.median(relative) < 0.10
    windows = result.rref_windows
    assert list(windows.columns) == ["window_start", "window_end", "window_centre", "points",
                                     "rref", "rref_se", "e0", "source"]
    assert set(windows["source"]) == {"night"}
    gaps = windows["window_start"].diff().dropna()
    assert (gaps >= pd.Timedelta(days=4)).all() and (gaps % pd.Timedelta(days=4)
                                                     == pd.Timedelta(0)).all()


def test_hourly_records(rng):
    """60-minute records: same method, planted E0 recovered within 12 %."""
    index, nee, filled, temperature, night, reco_true = _synthetic(
        rng, freq="60min", end="2021-12-31 23:00", e0=200.0, noise=0.2, measured_fraction=0.8)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night)
    assert result.e0_annual.loc[2021, "e0"] == pytest.approx(200.0, rel=0.12)
    assert result.reco.sum() == pytest.approx(reco_true.sum(), rel=0.03)
    assert result.e0_windows["points"].max() <= 15 * 11  # 11 night hours a day


def test_multi_year_e0_per_calendar_year(rng):
    """Two calendar years (one leap) with different planted E0 each get their own E0."""
    index = pd.date_range("2023-01-01", "2024-12-31 23:30", freq="30min")
    e0_true = np.where(index.year == 2023, 150.0, 280.0)
    index, nee, filled, temperature, night, _ = _synthetic(
        rng, start="2023-01-01", end="2024-12-31 23:30", e0=e0_true, noise=0.15)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night)
    annual = result.e0_annual
    assert list(annual.index) == [2023, 2024]
    assert annual.loc[2023, "e0"] == pytest.approx(150.0, rel=0.15)
    assert annual.loc[2024, "e0"] == pytest.approx(280.0, rel=0.15)
    np.testing.assert_array_equal(result.e0[index.year == 2023], annual.loc[2023, "e0"])
    np.testing.assert_array_equal(result.e0[index.year == 2024], annual.loc[2024, "e0"])
    windows = result.e0_windows
    crossing = windows["window_start"].dt.year != windows["window_end"].dt.year
    assert crossing.any()  # windows cross the year boundary


def test_year_touched_briefly_borrows_overlapping_windows(rng):
    """A record starting on 30 December: that year takes E0 from the windows overlapping it
    (the best-windows estimate; the joint fit uses the year's own records)."""
    index, nee, filled, temperature, night, _ = _synthetic(
        rng, start="2020-12-30", end="2021-03-31 23:30", e0=220.0, noise=0.15)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night,
                                 e0_method="best_windows")
    annual = result.e0_annual
    assert list(annual.index) == [2020, 2021]
    assert (result.e0_windows["year"] == 2020).sum() == 0
    assert annual.loc[2020, "windows_tried"] >= 1
    assert annual.loc[2020, "source"] == "fitted"


def test_night_gpp_negative_values_kept(rng):
    """Night GPP scatters around zero and negative values are kept, not clipped."""
    index, nee, filled, temperature, night, _ = _synthetic(rng)
    result = partition_nighttime(index, nee, filled, temperature, temperature, night)
    night_gpp = result.gpp[night]
    assert (night_gpp < 0).sum() > 0.2 * night.sum()
    assert abs(np.mean(night_gpp)) < 0.1


def test_missing_filled_temperature_gives_nan_reco(rng):
    """Reco (and GPP) are NaN only where the filled temperature is missing."""
    index, nee, filled, temperature, night, _ = _synthetic(rng)
    filled_temperature = temperature.copy()
    filled_temperature[100:110] = np.nan
    result = partition_nighttime(index, nee, filled, temperature, filled_temperature, night)
    assert np.isnan(result.reco[100:110]).all() and np.isnan(result.gpp[100:110]).all()
    assert np.isfinite(np.delete(result.reco, np.arange(100, 110))).all()


def test_deterministic(rng):
    """The same input gives byte-identical results."""
    data = _synthetic(rng)
    first = partition_nighttime(*data[:4], data[3], data[4])
    second = partition_nighttime(*data[:4], data[3], data[4])
    assert first.reco.tobytes() == second.reco.tobytes()
    pd.testing.assert_frame_equal(first.e0_windows, second.e0_windows)
    pd.testing.assert_frame_equal(first.rref_windows, second.rref_windows)


def test_apply_fit_gives_the_whole_method_on_other_filled_series(rng):
    """Reusing a fit on other filled NEE and temperature equals a fresh run (issue 17).

    The fits use only measured NEE and temperature (Reichstein et al. 2005, steps 1-2);
    Reco is eq. 11 of Lloyd & Taylor (1994) on the filled temperature, written out here.
    """
    index, nee, filled, temperature, night, _ = _synthetic(rng)
    fit = partition_nighttime(index, nee, nee, temperature, temperature, night)
    other_filled = filled + 0.5
    other_temperature = temperature + rng.normal(0.0, 1.0, temperature.size)
    fresh = partition_nighttime(index, nee, other_filled, temperature, other_temperature, night)
    reused = apply_fit(fit, other_filled, other_temperature)
    assert reused.reco.tobytes() == fresh.reco.tobytes()
    assert reused.gpp.tobytes() == fresh.gpp.tobytes()
    np.testing.assert_allclose(reused.reco, _eq11(other_temperature, fit.rref, fit.e0),
                               rtol=1e-12)
    pd.testing.assert_frame_equal(reused.rref_windows, fresh.rref_windows)
    with pytest.raises(ImplausibleValueError, match="temperature_filled"):
        apply_fit(fit, other_filled, other_temperature + 273.15)


def test_inputs_not_modified(rng):
    """Input Series and arrays are left unchanged."""
    index, nee, filled, temperature, night, _ = _synthetic(rng)
    series = [pd.Series(a, index=index) for a in (nee, filled, temperature, temperature)]
    night_series = pd.Series(night, index=index)
    copies = [s.copy() for s in series] + [night_series.copy()]
    index_copy = index.copy()
    partition_nighttime(index, *series, night_series)
    for original, copy in zip(series + [night_series], copies, strict=True):
        pd.testing.assert_series_equal(original, copy)
    assert index.equals(index_copy)


# --------------------------------------------------------------------------- #
# Rejection rules
# --------------------------------------------------------------------------- #
def _one_window(rng, temperature, e0=200.0, rref=2.0, noise=0.1, fraction=1.0):
    index = pd.date_range("2021-06-01 12:00", periods=15 * 48, freq="30min")
    hour = index.hour.to_numpy()
    night = (hour < 5) | (hour >= 21)
    truth = _eq11(temperature, rref, e0)
    nee = np.where(night & (rng.random(len(index)) < fraction),
                   truth + rng.normal(0, noise, len(index)), np.nan)
    return index, nee, temperature, night


def test_rejects_too_few_points(rng):
    """A window with fewer than e0_min_points night records is rejected."""
    temperature = np.linspace(5.0, 20.0, 15 * 48)
    index, nee, temperature, night = _one_window(rng, temperature, fraction=0.012)
    windows = fit_e0_windows(index, nee, temperature, night, e0_min_points=6)
    assert windows["points"].iloc[0] < 6
    assert not windows["accepted"].iloc[0]
    assert windows["reason"].iloc[0].startswith("too few night records")


def test_rejects_narrow_temperature_range(rng):
    """A window whose temperatures span less than 5 K is rejected (Reichstein et al. 2005)."""
    temperature = 12.0 + 1.5 * np.sin(np.linspace(0.0, 30.0, 15 * 48))
    index, nee, temperature, night = _one_window(rng, temperature)
    windows = fit_e0_windows(index, nee, temperature, night)
    window = windows.iloc[0]
    assert window["temperature_range"] < 5.0
    assert not window["accepted"]
    assert "temperature range below 5 K" in window["reason"]
    assert np.isfinite(window["e0"])  # still fitted, so the estimate is visible


def test_rejects_e0_out_of_bounds(rng):
    """A fitted E0 above the 450 K bound is rejected; the same data pass with wider bounds."""
    temperature = np.linspace(0.0, 25.0, 15 * 48)
    index, nee, temperature, night = _one_window(rng, temperature, e0=700.0, noise=0.05)
    windows = fit_e0_windows(index, nee, temperature, night)
    assert windows["e0"].iloc[0] > 450.0
    assert not windows["accepted"].iloc[0]
    assert "E0 outside 30-450 K" in windows["reason"].iloc[0]
    wide = fit_e0_windows(index, nee, temperature, night, e0_bounds=(30.0, 1000.0))
    assert wide["accepted"].iloc[0]


def test_rejects_large_relative_error(rng):
    """A window whose E0 standard error exceeds half of E0 (the default limit) is rejected."""
    temperature = np.linspace(5.0, 11.0, 15 * 48)
    index, nee, temperature, night = _one_window(rng, temperature, e0=100.0, noise=2.0)
    windows = fit_e0_windows(index, nee, temperature, night, e0_bounds=(1.0, 5000.0))
    window = windows.iloc[0]
    assert window["e0_se"] / abs(window["e0"]) > 0.5
    assert not window["accepted"]
    assert window["reason"] == "E0 relative standard error above 0.5"
    lenient = fit_e0_windows(index, nee, temperature, night, e0_bounds=(1.0, 5000.0),
                             e0_max_relative_error=5.0)
    assert lenient["accepted"].iloc[0]


def test_no_acceptable_window_error_message(rng):
    """No acceptable window: the error names the year, night records, windows, reasons, setting."""
    index, nee, filled, _, night, _ = _synthetic(rng, end="2021-03-31 23:30")
    flat = np.full(len(index), 8.0) + 0.5 * np.sin(np.arange(len(index)) / 10.0)
    with pytest.raises(InsufficientDataError) as info:
        partition_nighttime(index, nee, filled, flat, flat, night)
    message = str(info.value)
    usable = int((night & np.isfinite(nee)).sum())
    assert "year 2021" in message
    assert f"{usable} usable night records" in message
    assert "windows tried" in message
    assert "temperature range below 5 K" in message
    assert "e0_fallback" in message


def test_fallback_is_flagged(rng):
    """With e0_fallback set, a year without acceptable windows uses it and says so."""
    index, nee, filled, _, night, _ = _synthetic(rng, end="2021-03-31 23:30")
    flat = np.full(len(index), 8.0) + 0.5 * np.sin(np.arange(len(index)) / 10.0)
    result = partition_nighttime(index, nee, filled, flat, flat, night, e0_fallback=210.0)
    row = result.e0_annual.loc[2021]
    assert row["source"] == "fallback"
    assert row["e0"] == 210.0 and np.isnan(row["e0_se"])
    assert row["windows_accepted"] == 0 and row["windows_tried"] > 0
    np.testing.assert_array_equal(result.e0, 210.0)
    assert np.isfinite(result.reco).all()


def test_annual_e0_plain_mean_of_best_windows():
    """The year's E0 is the plain mean of the accepted windows with the smallest e0_se."""
    start = pd.Timestamp("2021-03-01")
    windows = pd.DataFrame({
        "window_start": [start + pd.Timedelta(days=5 * k) for k in range(5)],
        "e0": [100.0, 200.0, 300.0, 400.0, 999.0],
        "e0_se": [5.0, 1.0, 2.0, 3.0, 0.5],
        "accepted": [True, True, True, True, False],
    })
    windows["window_end"] = windows["window_start"] + pd.Timedelta(days=15)
    windows["year"] = 2021
    windows["points"] = 100
    windows["reason"] = ["", "", "", "", "E0 outside 30-450 K"]
    annual = annual_e0(windows)
    assert annual.loc[2021, "e0"] == pytest.approx((200.0 + 300.0 + 400.0) / 3)
    assert annual.loc[2021, "e0_se"] == pytest.approx(np.sqrt(1 + 4 + 9) / 3)
    assert annual.loc[2021, "windows_accepted"] == 4
    assert annual.loc[2021, "windows_used"] == 3
    assert annual.index.name == "year"
    one = annual_e0(windows, e0_best_windows=1)
    assert one.loc[2021, "e0"] == 200.0


# --------------------------------------------------------------------------- #
# Rref windows against statsmodels
# --------------------------------------------------------------------------- #
def test_rref_window_matches_statsmodels_ols(rng):
    """Rref with E0 fixed equals a no-intercept OLS of NEE on the Lloyd–Taylor shape."""
    index, nee, _, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    e0 = np.full(len(index), 230.0)
    windows = fit_rref_windows(index, nee, temperature, night, e0)
    window = windows.iloc[3]
    inside = (night & np.isfinite(nee) & (index >= window["window_start"])
              & (index < window["window_end"]))
    shape = _eq11(temperature[inside], 1.0, 230.0)
    # statsmodels: sm.OLS(nee, shape).fit() (no constant), .params[0] and .bse[0]
    fit = sm.OLS(nee[inside], shape).fit()
    message = f"statsmodels {statsmodels.__version__}"
    assert window["rref"] == pytest.approx(fit.params[0], rel=1e-10), message
    assert window["rref_se"] == pytest.approx(fit.bse[0], rel=1e-8), message
    assert window["points"] == inside.sum()
    assert window["e0"] == 230.0


def test_rref_windows_drop_sparse_and_negative(rng):
    """Windows with too few points or negative Rref are dropped; the rest kept."""
    index, nee, _, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    nee = nee.copy()
    first_days = index < pd.Timestamp("2021-01-07 12:00")
    nee[first_days] = np.nan                      # windows 1-2: no points
    middle = (index >= pd.Timestamp("2021-01-15 12:00")) & (index < pd.Timestamp(
        "2021-01-19 12:00"))
    nee[middle] = -np.abs(nee[middle])            # a negative-Rref window
    windows = fit_rref_windows(index, nee, temperature, night, np.full(len(index), 200.0))
    assert (windows["points"] >= 2).all() and (windows["rref"] >= 0).all()
    assert pd.Timestamp("2021-01-15 12:00") not in set(windows["window_start"])
    assert windows["window_start"].iloc[0] >= pd.Timestamp("2021-01-03 12:00")


def test_rref_interpolation_linear_and_constant_beyond_ends():
    """Rref is linear in time between centres and constant before the first and after the last."""
    index = pd.date_range("2021-01-01", "2021-01-12", freq="30min")
    windows = pd.DataFrame({"window_centre": pd.to_datetime(["2021-01-03", "2021-01-07"]),
                            "rref": [1.0, 3.0]})
    rref = rref_per_record(index, windows)
    series = pd.Series(rref, index=index)
    assert series["2021-01-01 00:00"] == 1.0
    assert series["2021-01-05 00:00"] == pytest.approx(2.0)
    assert series["2021-01-04 00:00"] == pytest.approx(1.5)
    assert series["2021-01-11 12:00"] == 3.0


# --------------------------------------------------------------------------- #
# Bad input
# --------------------------------------------------------------------------- #
def test_all_nan_input_raises(rng):
    """No measured night NEE at all: a clear InsufficientDataError."""
    index, _, filled, temperature, night, _ = _synthetic(rng, end="2021-02-28 23:30")
    empty = np.full(len(index), np.nan)
    with pytest.raises(InsufficientDataError, match="no usable night record"):
        partition_nighttime(index, empty, filled, temperature, temperature, night)


def test_near_empty_input_raises(rng):
    """A handful of night records: an InsufficientDataError naming the year."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-02-28 23:30")
    sparse = np.full(len(index), np.nan)
    keep = np.flatnonzero(np.isfinite(nee))[:5]
    sparse[keep] = nee[keep]
    with pytest.raises(InsufficientDataError, match="year 2021.*5 usable night records"):
        partition_nighttime(index, sparse, filled, temperature, temperature, night)


def test_empty_index_raises():
    """An empty record is an InsufficientDataError."""
    with pytest.raises(InsufficientDataError, match="empty"):
        fit_e0_windows(pd.DatetimeIndex([]), [], [], [])


def test_kelvin_temperature_rejected(rng):
    """Temperatures in kelvin are caught with a hint instead of a silent nonsense fit."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    with pytest.raises(ImplausibleValueError, match="temperature_measured.*kelvin"):
        partition_nighttime(index, nee, filled, temperature + 273.15, temperature, night)


def test_hot_desert_soil_within_the_readers_range_is_fitted(rng):
    """A bare desert soil at 2-5 cm reads 70-80 °C on summer afternoons (the ground surface
    above 90 °C in Death Valley (m)); the reader accepts soil up to
    VARIABLES["tsoil"].maximum, so the fit must too (regression: values of 70-80 °C were
    refused here as "temperature_measured: ... outside -90..70 °C, first at row ...")."""
    from fluxpart.variables import VARIABLES

    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    hot = temperature.copy()
    day = ~np.asarray(night)
    hot[np.flatnonzero(day)[:20]] = VARIABLES["tsoil"].maximum - 1.0
    fit = partition_nighttime(index, nee, filled, temperature, hot, night)
    assert np.all(np.isfinite(fit.reco))
    with pytest.raises(ImplausibleValueError, match="temperature_filled"):
        partition_nighttime(index, nee, filled, temperature, hot + 273.15, night)


def test_misaligned_input_raises(rng):
    """An array of the wrong length names the argument."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    with pytest.raises(FluxpartError, match="nee_filled: expected"):
        partition_nighttime(index, nee, filled[:-1], temperature, temperature, night)


def test_night_mask_with_missing_values_raises(rng):
    """A night mask with missing values is an error naming the row."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    mask = pd.Series(night, index=index, dtype="boolean")
    mask.iloc[7] = pd.NA
    with pytest.raises(FluxpartError, match="is_night: missing value at row 7"):
        partition_nighttime(index, nee, filled, temperature, temperature, mask)


@pytest.mark.parametrize(("setting", "value"), [("e0_min_points", 0),
                                                ("e0_bounds", (450.0, 30.0)),
                                                ("e0_window_days", -1.0),
                                                ("rref_min_points", 1.5),
                                                ("respiration_driver", "tsurface"),
                                                ("e0_method", "median")])
def test_bad_settings_raise_config_error(rng, setting, value):
    """Invalid settings give a ConfigError naming the setting."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, end="2021-01-31 23:30")
    with pytest.raises(ConfigError, match=setting):
        partition_nighttime(index, nee, filled, temperature, temperature, night,
                            **{setting: value})


def test_config_e0_method_choices():
    """Config accepts the two E0 estimates and names the setting for anything else."""
    assert Config().e0_method == "joint"
    assert Config(e0_method="best_windows").e0_method == "best_windows"
    with pytest.raises(ConfigError, match=r"\[processing\] e0_method"):
        Config(e0_method="median")


def test_low_light_rule_fits_rref_where_a_window_has_no_night():
    """Weeks of midnight sun: windows without night records take Rref from their
    low-light NEE = Rref f(T) - a Rg. Checked against statsmodels OLS on the same
    records (estimate and standard error; version printed on failure) and against the
    planted Rref (invented known truth, Lloyd & Taylor 1994 eq. 11 for f); with the rule
    off, such windows are dropped as before."""
    from fluxpart.partition.nighttime import fit_rref_windows

    rng = np.random.default_rng(44)
    index = pd.date_range("2021-06-01", periods=48 * 16, freq="30min")
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    rg = 5.0 + 595.0 * np.clip(np.cos(np.pi * (hour - 12.0) / 24.0), 0.0, None) ** 2
    temperature = 12.0 + 4.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
    rref_true, e0, slope = 2.5, 200.0, 0.02
    f = np.exp(e0 * (1.0 / 56.02 - 1.0 / (temperature + 273.15 - 227.13)))
    nee = rref_true * f - slope * rg + rng.normal(0.0, 0.2, len(index))
    night = np.zeros(len(index), dtype=bool)                     # the sun never sets
    e0_record = np.full(len(index), e0)
    windows = fit_rref_windows(index, nee, temperature, night, e0_record, rg=rg,
                               low_light_rg=100.0)
    assert set(windows["source"]) == {"low_light"} and len(windows) == 5   # noon-anchored
    assert abs(windows["rref"].median() / rref_true - 1.0) < 0.05
    for _, window in windows.iterrows():
        use = ((index >= window["window_start"]) & (index < window["window_end"])
               & (rg < 100.0))
        reference = sm.OLS(nee[use], np.column_stack([f[use], -rg[use]])).fit()
        message = f"statsmodels {statsmodels.__version__}"
        assert window["rref"] == pytest.approx(reference.params[0], rel=1e-9), message
        assert window["rref_se"] == pytest.approx(reference.bse[0], rel=1e-9), message
    with pytest.raises(InsufficientDataError):
        fit_rref_windows(index, nee, temperature, night, e0_record, rg=rg, low_light_rg=0.0)


def test_low_light_rule_leaves_short_runs_to_interpolation():
    """A run of night-less windows shorter than LOW_LIGHT_MIN_RUN_DAYS (15 days, the
    window of Reichstein et al. 2005 over which the temperature response is taken as
    constant) keeps the interpolation across it; a longer run is fitted at low light.
    Invented record: nights everywhere except a gap of 8 days and one of 24 days."""
    from fluxpart.partition import nighttime

    assert nighttime.LOW_LIGHT_MIN_RUN_DAYS == 15.0
    rng = np.random.default_rng(45)
    index = pd.date_range("2021-05-01", periods=48 * 80, freq="30min")
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    rg = np.clip(700.0 * np.sin(np.pi * (hour - 4.0) / 16.0), 0.0, None)
    temperature = 12.0 + 4.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
    f = np.exp(200.0 * (1.0 / 56.02 - 1.0 / (temperature + 273.15 - 227.13)))
    nee = 2.5 * f - 0.02 * rg + rng.normal(0.0, 0.2, len(index))
    night = rg <= 0.0
    no_night = ((days >= 20) & (days < 28)) | ((days >= 40) & (days < 64))
    nee[night & no_night] = np.nan
    windows = nighttime.fit_rref_windows(index, nee, temperature, night,
                                         np.full(len(index), 200.0), rg=rg, low_light_rg=100.0)
    centre_days = np.asarray((windows["window_centre"] - index[0]) / pd.Timedelta(days=1))
    low = windows["source"] == "low_light"
    assert low.any() and (centre_days[low] > 40).all() and (centre_days[low] < 64).all()
    # the window wholly inside the 8-day gap (centre day 25.5) is left out: interpolated
    assert 25.5 not in centre_days and not (low & (centre_days < 40)).any()


def test_records_at_or_below_t0_get_the_equations_limit_zero(rng):
    """Air below T0 = 227.13 K (-46.02 °C; a Siberian cold spell): Lloyd & Taylor (1994)
    eq. 11 falls to 0 as T approaches T0 (T0 is where respiration vanishes), while the
    formula itself is undefined there. Those records' Reco was NaN, which made the year's
    nighttime Reco and GPP NaN without a word (review, round ten): they now take the
    limit, 0, and every other record is unchanged. Temperatures above T0 in the fits."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, e0=220.0)
    fit = partition_nighttime(index, nee, filled, temperature, temperature, night)
    cold = temperature.copy()
    spell = (index >= "2021-01-20") & (index < "2021-01-23")
    cold[spell] = -50.0
    result = apply_fit(fit, filled, cold)
    assert np.all(result.reco[spell] == 0.0)
    assert np.isfinite(result.reco).all() and np.isfinite(result.gpp).all()
    np.testing.assert_array_equal(result.reco[~spell], fit.reco[~spell])
    # just above T0 the equation itself is tiny already
    assert _eq11(-46.0, 2.0, 220.0) < 1e-80


def test_records_below_t0_are_left_out_of_the_fits(rng):
    """Below T0 (-46.02 °C) Lloyd & Taylor (1994) eq. 11 has no respiration to fit and
    1/(T - T0) changes sign; such records used to enter the E0 profile with a large
    positive temperature term and dominate it. Night records at -50 °C added to a record
    leave the fit exactly as it is without them."""
    index, nee, filled, temperature, night, _ = _synthetic(rng, e0=220.0)
    base = partition_nighttime(index, nee, filled, temperature, temperature, night)
    cold_nights = night & (index >= "2021-02-01") & (index < "2021-02-04")
    cold_temperature = np.where(cold_nights, -50.0, temperature)
    cold_nee = np.where(cold_nights, 0.3, nee)
    plain_nee = np.where(cold_nights, np.nan, nee)
    with_cold = partition_nighttime(index, cold_nee, filled, cold_temperature,
                                    cold_temperature, night)
    without = partition_nighttime(index, plain_nee, filled, cold_temperature,
                                  cold_temperature, night)
    assert with_cold.e0_annual.equals(without.e0_annual)
    np.testing.assert_array_equal(with_cold.reco, without.reco)
    assert abs(with_cold.e0_annual["e0"].iloc[0] - base.e0_annual["e0"].iloc[0]) < 30.0


# --------------------------------------------------------------------------- #
# Speed without a changed bit (round speed18): the weighted-median sort
# --------------------------------------------------------------------------- #
def _stable_reference(order, key_sorted, ratio_sorted, weight_sorted):
    """The stable sort's order from any ascending order: NumPy's ``np.lexsort`` (a
    general-purpose library; stable) by key, then position."""
    order[:] = np.take_along_axis(order, np.lexsort((order, key_sorted), axis=-1), axis=1)
    return np.arange(order.shape[0])


def test_tie_order_gives_numpys_stable_argsort_values():
    """External check: NumPy's ``np.argsort(kind="stable")``. Keys with many ties (few
    distinct values), NaNs, -0.0, ties holding equal and unequal (ratio, weight) bits: the
    ratios and weights sorted by the default sort plus the tie order are bit for bit those
    sorted by the stable argsort, and where every tie differs the order itself is."""
    from fluxpart.partition.nighttime import _order_ties

    rng = np.random.default_rng(18)
    for trial in range(150):
        rows, size = int(rng.integers(1, 6)), int(rng.integers(1, 300))
        key = (rng.normal(size=(rows, size)) if trial % 5 == 0
               else rng.integers(0, int(rng.integers(1, 30)), (rows, size)) / 7.0 + 3.0)
        if trial % 3 == 0:
            key[rng.random((rows, size)) < 0.05] = np.nan
        if trial % 4 == 0:
            key[:, ::4] = -0.0
        # unequal values within ties (every record its own), or values set by the key
        ratio = rng.normal(size=key.shape) if trial % 2 else np.nan_to_num(key) * 2.0
        weight = rng.random(key.shape) if trial % 2 else np.ones(key.shape)
        offset = (np.arange(rows) * size)[:, None]
        stable = np.argsort(key, axis=1, kind="stable") + offset
        order = np.argsort(key, axis=1) + offset
        _order_ties(order, key.take(order), ratio.take(order), weight.take(order))
        np.testing.assert_array_equal(ratio.take(order).view(np.int64),
                                      ratio.take(stable).view(np.int64))
        np.testing.assert_array_equal(weight.take(order).view(np.int64),
                                      weight.take(stable).view(np.int64))
        if trial % 2:
            np.testing.assert_array_equal(order, stable)


def test_weighted_median_among_equal_keys_is_the_stable_sorts(monkeypatch):
    """External check: NumPy's stable ``np.lexsort``. Ratios too large for the arctan of
    the sort key to tell apart (equal keys, different ratios) carrying most of a window's
    weight put the weighted median among equal keys: the Rref and deviations of every grid
    E0 equal those of the rows sorted in the stable order, bit for bit."""
    from fluxpart.partition import nighttime

    rng = np.random.default_rng(7)
    sizes = np.array([40, 60, 50])
    starts = np.r_[0, np.cumsum(sizes)[:-1]]
    window = np.repeat(np.arange(sizes.size), sizes)
    term = rng.uniform(0.002, 0.006, sizes.sum())
    flux = rng.uniform(1.0, 5.0, sizes.sum())
    flux[rng.random(sizes.sum()) < 0.7] = rng.uniform(1e17, 9e17)    # arctan(ratio) = pi/2
    flux[::3] *= rng.uniform(1.0, 3.0, flux[::3].size)
    grid = np.arange(50.0, 300.0, 10.0)
    fast = nighttime._deviation_rows(flux, term, starts, sizes, window, grid)
    monkeypatch.setattr(nighttime, "_order_ties", _stable_reference)
    stable = nighttime._deviation_rows(flux, term, starts, sizes, window, grid)
    for mine, theirs in zip(fast, stable, strict=True):
        np.testing.assert_array_equal(mine.view(np.int64), theirs.view(np.int64))


def test_joint_e0_with_zero_fluxes_equals_the_stable_sort_profile(rng, monkeypatch):
    """External check: NumPy's stable ``np.lexsort``. Night NEE rounded to 0.1 µmol m-2
    s-1 (zero fluxes at many temperatures: equal keys, unequal weights) and temperature to
    1 °C give the same absolute deviations and Rref of every grid E0 and window, and so the
    same joint E0 table, bit for bit as the profile whose rows are all put in the stable
    sort's order."""
    from fluxpart.partition import nighttime

    index, nee, _, temperature, night, _ = _synthetic(rng, e0=220.0)
    nee, temperature = np.round(nee, 1), np.round(temperature, 0)
    assert (nee[night] == 0.0).sum() > 50
    profile = nighttime._absolute_deviation_profile

    def fit(record):
        def recorded(*args):
            out = profile(*args)
            record.append(out)
            return out

        monkeypatch.setattr(nighttime, "_absolute_deviation_profile", recorded)
        return fit_e0_joint(index, nee, temperature, night)

    fast_profiles, stable_profiles = [], []
    fast = fit(fast_profiles)
    monkeypatch.setattr(nighttime, "_order_ties", _stable_reference)
    stable = fit(stable_profiles)
    pd.testing.assert_frame_equal(fast, stable, check_exact=True)
    assert np.isfinite(fast["e0"]).all() and len(fast_profiles) == len(stable_profiles) > 0
    for (deviation, rref), (deviation_s, rref_s) in zip(fast_profiles, stable_profiles,
                                                        strict=True):
        np.testing.assert_array_equal(deviation.view(np.int64), deviation_s.view(np.int64))
        np.testing.assert_array_equal(rref.view(np.int64), rref_s.view(np.int64))


# --------------------------------------------------------------------------- #
# Respiration near the noise floor (round trial14)
# --------------------------------------------------------------------------- #
def test_rref_window_of_nights_too_cold_to_resolve_it_is_dropped():
    """Lloyd & Taylor (1994) eq. 11 with E0 = 400 K at -40 degC is about 1e-12 of its
    value at 10 degC: a window of such nights divides noise by ~0, and its Rref (and
    standard error) ran to 1e5 umol m-2 s-1, which the interpolation then carried to
    warmer records. A window whose Rref's standard error exceeds the plausible range of
    NEE itself (VARIABLES, 100 umol m-2 s-1) is now dropped and interpolated across.
    Invented known-truth data: Rref 1.5 planted, a cold spell of 12 days."""
    from fluxpart.partition import nighttime
    from fluxpart.variables import VARIABLES

    assert nighttime.RREF_SE_LIMIT == VARIABLES["nee"].maximum
    assert _eq11(-40.0, 1.0, 400.0) < 1e-10          # eq. 11 written out independently
    rng = np.random.default_rng(142)
    index = pd.date_range("2021-01-01", periods=48 * 40, freq="30min")
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    night = (hour < 6.0) | (hour >= 19.0)
    cold = (days >= 14) & (days < 26)
    temperature = np.where(cold, -40.0, 5.0) + rng.normal(0.0, 0.5, len(index))
    nee = np.where(night, _eq11(temperature, 1.5, 400.0) + rng.normal(0.0, 0.3, len(index)),
                   np.nan)
    windows = nighttime.fit_rref_windows(index, nee, temperature, night,
                                         np.full(len(index), 400.0))
    assert (windows["rref_se"] <= nighttime.RREF_SE_LIMIT).all()
    centres = np.asarray((windows["window_centre"] - index[0]) / pd.Timedelta(days=1))
    assert not ((centres > 15) & (centres < 25)).any()
    rref = nighttime.rref_per_record(index, windows)
    assert np.abs(rref / 1.5 - 1.0).max() < 0.25



# --------------------------------------------------------------------------- #
# Fits on records with the sun down (Config.night_fit_records = "sun_down")
# --------------------------------------------------------------------------- #
def test_sun_down_fit_recovers_reco_where_twilight_holds_uptake(rng):
    """Known truth: twilight records (sun up, Rg below the night threshold) that hold
    uptake bias the all-night fit low; the fit on records with the sun down is the fit
    the same record without that uptake gives, and recovers the planted annual Reco.
    Uptake wherever light is above the leaves' compensation point is a fact of leaf
    physiology (common practice)."""
    index, nee, filled, temperature, night, reco = _synthetic(rng, noise=0.2, freq="60min")
    hour = index.hour.to_numpy()
    twilight = night & (((hour >= 4) & (hour < 6)) | ((hour >= 19) & (hour < 21)))
    uptake = np.where(twilight, nee - 0.25 * reco, nee)   # a quarter of Reco (invented)
    sun_up = ~night | twilight
    settings = _config_settings()

    def annual(measured, **extra):
        return partition_nighttime(index, measured, filled, temperature, temperature, night,
                                   **settings, **extra).reco

    dark = annual(uptake, sun_up=sun_up)
    assert annual(uptake).sum() / reco.sum() - 1 < -0.05     # the uptake pulls the fit low
    assert np.array_equal(dark, annual(nee, sun_up=sun_up))   # twilight records left out
    assert abs(dark.sum() / reco.sum() - 1) < 0.02
    # with the sun down everywhere the fit is the all-night one
    assert np.array_equal(annual(uptake, sun_up=np.zeros_like(night)), annual(uptake))


def test_sun_down_mask_falls_back_to_every_night_record_where_dark_ones_are_too_few():
    """A 4-day window with at least `min_points` usable records with the sun down keeps
    those alone; one with fewer (midnight sun) keeps every night record, as before."""
    seconds = np.arange(8 * 24) * 3600.0             # 8 days of hours from the anchor (noon)
    hour = (12 + np.arange(8 * 24)) % 24
    night = (hour < 6) | (hour >= 20)
    sun_up = (hour >= 4) & (hour < 22)
    sun_up[4 * 24:] = True                           # the second window: the sun never sets
    usable = night & (np.arange(8 * 24) % 5 != 0)    # some night records not measured
    dark = night & ~sun_up
    first = slice(0, 4 * 24)
    count = int(np.sum(usable[first] & dark[first]))
    mask = fit_mask(seconds, usable, night, sun_up, window_days=4.0, min_points=count)
    assert np.array_equal(mask[first], dark[first])
    assert np.array_equal(mask[4 * 24:], night[4 * 24:])
    fewer = fit_mask(seconds, usable, night, sun_up, window_days=4.0, min_points=count + 1)
    assert np.array_equal(fewer, night)


def test_only_sun_down_passes_the_sun_to_the_nighttime_fits():
    """The default run calls the method exactly as before (no ``sun_up``)."""
    from fluxpart.method_settings import nighttime_settings

    index = pd.date_range("2021-06-01", periods=48, freq="30min")
    rg, sun_up = np.zeros(48), np.zeros(48, dtype=bool)
    assert "sun_up" not in nighttime_settings(Config(), rg, index, sun_up=sun_up)
    chosen = nighttime_settings(Config(night_fit_records="sun_down"), rg, index, sun_up=sun_up)
    assert chosen["sun_up"] is sun_up
