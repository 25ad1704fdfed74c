"""The exponential (constant-Q10) respiration form and its structural part.

Sources: Lloyd & Taylor (1994), Functional Ecology 8:315-323, eq. 11 (written out here
independently of fluxpart); the exponential Q10 form R = Rref Q10^((T - Tref)/10) is the
textbook van 't Hoff form (common practice). Data below are invented known-truth series.
"""

import dataclasses

import numpy as np
import pandas as pd
import pytest

from fluxpart.partition.nighttime import partition_nighttime
from fluxpart.partition.respiration_form import average_forms, exponential_reco
from fluxpart.responses import exponential_equivalent_temperature, lloyd_taylor
from fluxpart.uncertainty import UncertaintyInputs, driver_weight, period_uncertainty

SPAN = 283.15 - 227.13            # Tref - T0 of Lloyd & Taylor (1994) [K]


def test_lloyd_taylor_at_the_equivalent_temperature_is_exponential():
    """LT(T*) = Rref exp(E0 (T - 10)/(2 D²)) exactly, T* = Tref at Tref, and E0 of 60
    and 900 K give Q10 = exp(10 E0 / (2 D²)) = 1.10 and 4.20 (eq. 11 written out)."""
    temperature = np.linspace(-60.0, 60.0, 121)
    star = exponential_equivalent_temperature(temperature)
    for e0 in (60.0, 300.0, 900.0):
        expected = 2.0 * np.exp(e0 * (temperature - 10.0) / (2.0 * SPAN**2))
        np.testing.assert_allclose(lloyd_taylor(star, 2.0, e0), expected, rtol=1e-12)
    assert exponential_equivalent_temperature(10.0) == pytest.approx(10.0)
    q10 = [lloyd_taylor(exponential_equivalent_temperature(20.0), 1.0, e0)
           / lloyd_taylor(exponential_equivalent_temperature(10.0), 1.0, e0) for e0 in (60, 900)]
    assert q10 == pytest.approx([1.10, 4.20], abs=0.006)
    assert np.isnan(exponential_equivalent_temperature(10.0 + 2 * SPAN + 1.0))


def _q10_year(rng, q10=3.0):
    """Invented site-year: night respiration 2 Q10^((T - 10)/10) over -25..+25 °C."""
    index = pd.date_range("2021-01-01", "2021-12-31 23:30", freq="30min")
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    temperature = (0.0 - 18.0 * np.cos(2 * np.pi * (days - 20.0) / 365.25)
                   + 5.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0))
    night = (hour < 6.0) | (hour >= 19.0)
    reco = 2.0 * q10 ** ((temperature - 10.0) / 10.0)
    filled = reco - np.where(night, 0.0, 6.0 * np.clip(np.sin(np.pi * (hour - 6) / 13), 0, None)) \
        + rng.normal(0.0, 0.2, len(index))
    measured = np.where(night & (rng.random(len(index)) < 0.6), filled, np.nan)
    return index, measured, filled, temperature, night, reco


def test_exponential_fit_recovers_a_constant_q10_that_lloyd_taylor_misses():
    """Known truth (invented): Q10 = 3 over -25..+25 °C. The exponential refit
    recovers annual Reco within 3 %, and the night data give it the weight (BIC)."""
    rng = np.random.default_rng(3)
    index, measured, filled, temperature, night, reco = _q10_year(rng)
    central = partition_nighttime(index, measured, filled, temperature, temperature, night)
    other = exponential_reco(index, measured, filled, temperature, temperature, night)
    assert other.sum() == pytest.approx(reco.sum(), rel=0.03)
    assert abs(central.reco.sum() / reco.sum() - 1) > abs(other.sum() / reco.sum() - 1)
    assert driver_weight(measured, night, central.reco, other) > 0.9


def flat_inputs(**parts) -> UncertaintyInputs:
    """Two invented days of 30-minute records, every flux 1 µmol m-2 s-1, no random,
    gap-filling, u* or parameter part: only the structural `parts` given."""
    index = pd.date_range("2021-06-01", periods=2 * 48, freq="30min")
    n = len(index)
    zeros = np.zeros(n)
    fluxes = pd.DataFrame({name: np.ones(n) for name in (
        "nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")}, index=index)
    return UncertaintyInputs(
        measured=np.ones(n, dtype=bool), noise_sigma=zeros, is_night=index.hour < 6,
        fluxes=fluxes, runs={}, gapfill_model=None, e0_delta=zeros,
        night_window=np.zeros(n, dtype=int), night_relative_se=np.full(n, np.nan),
        day_window=np.zeros(n, dtype=int), day_relative_se=np.full(n, np.nan), **parts)


def test_form_part_is_the_spread_times_the_difference_in_every_partitioned_total():
    """s |Σ ΔReco| with s = sqrt(w) about Lloyd-Taylor (as for the temperature driver),
    in all four totals."""
    n = 2 * 48
    inputs = flat_inputs(form_delta=np.full(n, 0.5), form_weight=0.36, form_spread=0.6)
    out = period_uncertainty(inputs, np.zeros(n, dtype=int), 30).iloc[0]
    expected = 0.6 * 0.5 * n * 1800 * 12.011e-6
    assert out["reco_uncertainty_respiration_form"] == pytest.approx(expected)
    # the daytime method keeps Lloyd-Taylor: sqrt(w) = 0.6 about it, whatever the nighttime share
    assert out["reco_daytime_uncertainty_respiration_form"] == pytest.approx(expected)
    for flux in ("gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        assert out[f"{flux}_uncertainty_total"] >= expected * (1 - 1e-12)
    averaged = period_uncertainty(dataclasses.replace(inputs, form_spread=0.48),
                                  np.zeros(n, dtype=int), 30).iloc[0]   # sqrt(0.36 x 0.64)
    assert averaged["reco_uncertainty_respiration_form"] == pytest.approx(0.8 * expected)
    assert averaged["reco_daytime_uncertainty_respiration_form"] == pytest.approx(expected)


def test_model_average_moves_reco_to_a_constant_q10_truth_and_states_the_bma_spread():
    """Known truth (invented): Q10 = 3. The BIC-weighted average of the two forms is
    closer to the true annual Reco than Lloyd-Taylor alone, and its stated spread is the
    between-model standard deviation of Bayesian model averaging,
    sqrt(sum_k w_k (R_k - R_avg)^2) (Hoeting et al. 1999, eq. for the posterior variance
    (m)), written out here; "lloyd_taylor" keeps the Lloyd-Taylor Reco with spread
    sqrt(w) |ΔR|, the root mean square error of choosing it."""
    rng = np.random.default_rng(3)
    index, measured, filled, temperature, night, reco = _q10_year(rng)
    central = partition_nighttime(index, measured, filled, temperature, temperature, night)
    other = exponential_reco(index, measured, filled, temperature, temperature, night)
    w = driver_weight(measured, night, central.reco, other)
    form = average_forms(central.reco, other, w, "average")
    averaged = central.reco + form.shift
    assert abs(averaged.sum() / reco.sum() - 1) < abs(central.reco.sum() / reco.sum() - 1)
    totals = np.array([central.reco.sum(), other.sum()])
    weights = np.array([1.0 - w, w])
    mean = weights @ totals
    assert averaged.sum() == pytest.approx(mean, rel=1e-9)
    between = np.sqrt(weights @ (totals - mean) ** 2)
    assert form.spread_factor * abs(totals[1] - totals[0]) == pytest.approx(between, rel=1e-9)
    kept = average_forms(central.reco, other, w, "lloyd_taylor")
    assert not kept.shift.any()
    assert kept.spread_factor == pytest.approx(np.sqrt(w))


def test_model_average_without_an_exponential_fit_is_lloyd_taylor():
    """A failed exponential refit leaves the Lloyd-Taylor Reco and no form part."""
    reco = np.array([1.0, 2.0, 3.0])
    form = average_forms(reco, None, 0.8)
    assert form.weight == 0.0 and form.share == 0.0 and form.spread_factor == 0.0
    np.testing.assert_array_equal(form.shift, np.zeros(3))
    with pytest.raises(ValueError, match="respiration_form"):
        average_forms(reco, reco, 0.5, "q10")


def test_recorded_form_weight_is_the_laplace_bic_weight_and_says_so():
    """The manifest's respiration_form record names the criterion its weight follows: the
    BIC under Laplace errors, -2 ln L = 2n ln(2 SAD / n) + 2n at the fitted scale (Kotz et
    al. 2001 (m)), so equal-parameter models weigh 1 / (1 + (SAD_exp / SAD_LT)^n) (Schwarz
    1978). Invented night records where the two criteria disagree: the Lloyd-Taylor
    residuals are small but for one spike, the exponential's moderate throughout, so sums
    of squares favour the exponential form and sums of absolute residuals Lloyd-Taylor."""
    n = 40
    nee = np.full(n, 2.0)
    lloyd = nee + np.r_[np.full(n - 1, 0.05), 6.0]
    exponential = nee + 0.5
    sad_lt, sad_exp = np.abs(nee - lloyd).sum(), np.abs(nee - exponential).sum()
    assert np.square(nee - exponential).sum() < np.square(nee - lloyd).sum()   # SSR: exp
    expected = 1.0 / (1.0 + (sad_exp / sad_lt) ** n)
    weight = driver_weight(nee, np.ones(n, dtype=bool), lloyd, exponential)
    assert weight == pytest.approx(expected, rel=1e-12) and weight < 0.5
    record = average_forms(lloyd, exponential, weight).to_dict()
    assert record["exponential_weight"] == round(expected, 6)
    assert "under Laplace errors" in record["criterion"]


def test_driver_day_prior_equal_gives_the_day_records_at_least_half_the_weight():
    """Equal prior of model averaging (Burnham & Anderson 2002, ch. 4 (m)): with
    ``driver_day_prior = "equal"`` the daytime records' part of the temperature
    difference takes weight max(w, 1/2), so |Σ_day Δ| / √2 where the night data gave the
    other temperature w = 0.04; the night records keep √w; daytime evidence for the
    temperature in use (t > 1.96) keeps w; the default keeps √w |ΣΔ|."""
    from fluxpart.uncertainty import driver_day_weight
    assert driver_day_weight(0.04, None, 1.96, "equal") == 0.5
    assert driver_day_weight(0.04, -3.0, 1.96, "equal") == 0.5
    assert driver_day_weight(0.04, 2.5, 1.96, "equal") == 0.04
    assert driver_day_weight(0.7, None, 1.96, "equal") == 0.7
    assert driver_day_weight(0.04, None, 1.96, "night") == 0.04
    n = 2 * 48
    night = pd.date_range("2021-06-01", periods=n, freq="30min").hour < 6
    delta = np.where(night, -0.2, 0.5)        # the fits nearly agree at night
    to_carbon = 1800 * 12.011e-6
    keys = np.zeros(n, dtype=int)
    default = period_uncertainty(flat_inputs(driver_delta=delta, driver_weight=0.04),
                                 keys, 30).iloc[0]
    assert default["reco_uncertainty_temperature_driver"] == pytest.approx(
        0.2 * abs(delta.sum()) * to_carbon)
    equal = period_uncertainty(flat_inputs(driver_delta=delta, driver_weight=0.04,
                                           driver_day_weight=0.5), keys, 30).iloc[0]
    expected = abs(0.2 * delta[night].sum() + np.sqrt(0.5) * delta[~night].sum()) * to_carbon
    assert equal["reco_uncertainty_temperature_driver"] == pytest.approx(expected)
    assert equal["reco_nighttime_uncertainty_total"] > default["reco_nighttime_uncertainty_total"]
