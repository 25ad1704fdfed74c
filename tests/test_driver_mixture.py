"""Tests of fluxpart.driver_mixture (the other temperature's share in the night's mixture).

External facts: the least-absolute-deviation fit of one coefficient is a weighted median
(Koenker & Bassett 1978, Econometrica 46:33-50 (m)), checked against scipy's bounded scalar
minimiser on the same loss (a general-purpose library); Lloyd & Taylor (1994) eq. 11 with
Tref = 283.15 K and T0 = 227.13 K, written out here; double-exponential (Laplace) flux errors
(Hollinger & Richardson 2005, Tree Physiology 25:873-885). Known-truth recovery tests use
invented weather and fluxes (the only place invented data is used).
"""
import numpy as np
import pandas as pd
import pytest
from scipy.optimize import minimize_scalar

import fluxpart
from fluxpart import demo
from fluxpart.config import Config
from fluxpart.driver_mixture import (
    MIN_RECORDS,
    SHARE_DRAWS,
    mixture_share,
    mixture_share_draws,
    mixture_shown,
)


def _eq11(temperature_celsius, rref, e0=308.56):
    """Lloyd & Taylor (1994) eq. 11, written out independently of fluxpart."""
    kelvin = np.asarray(temperature_celsius, dtype=float) + 273.15
    return rref * np.exp(e0 * (1.0 / (283.15 - 227.13) - 1.0 / (kelvin - 227.13)))


def _two_fits(seed, n=3000):
    """Invented night records: two temperatures (soil damped and lagged against air) and
    the Reco each alone would give."""
    rng = np.random.default_rng(seed)
    days = np.arange(n) / 20.0
    tair = 12 + 8 * np.sin(2 * np.pi * days / 365) + 4 * np.sin(2 * np.pi * days / 1.0)
    tsoil = 12 + 6 * np.sin(2 * np.pi * (days - 10) / 365) + 0.8 * np.sin(
        2 * np.pi * (days - 0.2) / 1.0)
    tair = tair + pd.Series(rng.normal(0, 2.5, n)).rolling(20, min_periods=1).mean().to_numpy()
    return rng, _eq11(tair, 3.0), _eq11(tsoil, 3.0)


@pytest.mark.parametrize("share", [0.0, 0.3, 0.6, 1.0])
def test_a_planted_mixture_share_is_recovered(share):
    """Known truth: night NEE = (1 - s) Reco(soil) + s Reco(air) + Laplace noise; the share
    of the air-temperature fit is recovered within 0.05."""
    rng, air, soil = _two_fits(seed=1)
    nee = (1 - share) * soil + share * air + rng.laplace(0, 0.4, air.size)
    night = np.ones(air.size, bool)
    assert mixture_share(nee, night, soil, air) == pytest.approx(share, abs=0.05)
    assert mixture_share(nee, night, air, soil) == pytest.approx(1 - share, abs=0.05)


def test_the_share_minimises_the_sum_of_absolute_deviations():
    """The weighted median against scipy's bounded minimiser of
    s -> sum |NEE - ((1 - s) central + s other)| on [0, 1] (Koenker & Bassett 1978 (m))."""
    rng, air, soil = _two_fits(seed=2, n=801)
    nee = 0.45 * air + 0.55 * soil + rng.laplace(0, 0.8, air.size)

    def loss(s):
        return np.abs(nee - ((1 - s) * soil + s * air)).sum()

    best = minimize_scalar(loss, bounds=(0.0, 1.0), method="bounded",
                           options={"xatol": 1e-10}).x
    found = mixture_share(nee, np.ones(air.size, bool), soil, air)
    assert loss(found) <= loss(best) + 1e-9
    assert found == pytest.approx(best, abs=1e-4)


def test_day_records_missing_values_and_equal_fits_are_left_out():
    """Only night records with all three values and differing fits count; fewer than
    MIN_RECORDS of them give 0."""
    rng, air, soil = _two_fits(seed=3, n=400)
    nee = 0.5 * air + 0.5 * soil
    night = np.arange(air.size) % 2 == 0
    day_nee = np.where(night, nee, soil + 50.0)      # day records far off: must not count
    assert mixture_share(day_nee, night, soil, air) == pytest.approx(0.5, abs=1e-6)
    holes = nee.copy()
    holes[::3] = np.nan
    assert mixture_share(holes, night, soil, air) == pytest.approx(0.5, abs=1e-6)
    assert mixture_share(nee, night, soil, soil) == 0.0
    few = np.zeros(air.size, bool)
    few[:2 * (MIN_RECORDS - 1):2] = True
    assert mixture_share(nee, few, soil, air) == 0.0


def test_the_share_lies_in_the_unit_interval():
    """A measured flux beyond both fits is the nearer fit's (share clipped to 0 or 1)."""
    _, air, soil = _two_fits(seed=4, n=500)
    night = np.ones(air.size, bool)
    beyond_air = air + 2.0 * (air - soil)
    assert mixture_share(beyond_air, night, soil, air) == 1.0
    assert mixture_share(beyond_air, night, air, soil) == 0.0


def test_a_run_on_mixed_respiration_states_the_share_in_the_temperature_part():
    """Known truth through process(): the invented demo year with its night NEE replaced by
    half soil-, half air-temperature respiration (Lloyd & Taylor eq. 11, Rref 2.5) and
    Laplace noise. The night data choose one temperature; the temperature part of the
    stated Reco uncertainty is at least the other's mixture share times the difference
    it makes (before, the BIC weight of a decisive choice gave about 0), and the run is the
    same on a second call (a pure function of its input)."""
    frame, _ = demo.site_year(seed=5)
    rng = np.random.default_rng(5)
    night = (frame["rg"] < 5).to_numpy()
    planted = 0.5 * _eq11(frame["tair"], 2.5) + 0.5 * _eq11(frame["tsoil"], 2.5)
    frame = frame.copy()
    nee = frame["nee"].to_numpy(dtype=float).copy()
    measured = np.isfinite(nee)
    nee[night & measured] = (planted[night & measured]
                             + rng.laplace(0, 0.5, int((night & measured).sum())))
    frame["nee"] = nee
    config = Config(ustar_bootstrap_draws=0)
    result = fluxpart.process(frame, demo.site(), config)
    year = result.annual.index[0]
    part = float(result.annual.loc[year, "reco_uncertainty_temperature_driver"])
    chosen = result.provenance["respiration_driver"]["chosen"]
    other = fluxpart.process(frame, demo.site(), Config(
        ustar_bootstrap_draws=0, respiration_driver="tsoil" if chosen == "tair" else "tair"))
    difference = abs(float(other.annual.loc[year, "reco_nighttime"])
                     - float(result.annual.loc[year, "reco_nighttime"]))
    assert difference > 5.0                          # the two temperatures differ here
    assert part >= 0.2 * difference
    again = fluxpart.process(frame, demo.site(), config)
    assert float(again.annual.loc[year, "reco_uncertainty_temperature_driver"]) == part


def _index(n):
    """Record times of the invented nights: 20 records a day (as in `_two_fits`)."""
    return pd.Timestamp("2021-01-01") + pd.to_timedelta(np.arange(n) * 72, unit="min")


def test_the_share_draws_are_reproducible_and_in_the_unit_interval():
    """The same input and seed give the same draws; every draw is a share in [0, 1]."""
    rng, air, soil = _two_fits(seed=4, n=1200)
    nee = 0.3 * air + 0.7 * soil + rng.laplace(0, 0.6, air.size)
    night = np.ones(air.size, bool)
    first = mixture_share_draws(nee, night, soil, air, _index(air.size))
    again = mixture_share_draws(nee, night, soil, air, _index(air.size))
    assert first.shape == (SHARE_DRAWS,)
    np.testing.assert_array_equal(first, again)
    assert ((first >= 0) & (first <= 1)).all()
    few = mixture_share_draws(nee[:MIN_RECORDS - 1], night[:MIN_RECORDS - 1],
                              soil[:MIN_RECORDS - 1], air[:MIN_RECORDS - 1],
                              _index(MIN_RECORDS - 1))
    assert few.size == 0


def test_the_share_draws_spread_as_the_share_over_independent_noise():
    """Known truth: the standard deviation of the resampled shares of one record set is
    within a factor 1.6 of the spread of the share over 40 independent Laplace noise draws
    on the same nights (the bootstrap standard error estimates the sampling standard
    deviation, Efron & Tibshirani 1993, ch. 6 (m); Laplace errors, Hollinger & Richardson
    2005)."""
    rng, air, soil = _two_fits(seed=5, n=1500)
    night = np.ones(air.size, bool)
    truth = 0.35 * air + 0.65 * soil
    shares = [mixture_share(truth + rng.laplace(0, 1.5, air.size), night, soil, air)
              for _ in range(40)]
    spread = np.std(shares, ddof=1)
    nee = truth + rng.laplace(0, 1.5, air.size)
    draws = mixture_share_draws(nee, night, soil, air, _index(air.size))
    assert spread > 0.01
    assert spread / 1.6 < draws.std() < spread * 1.6
    assert draws.mean() == pytest.approx(0.35, abs=0.1)


def test_the_spread_setting_weighs_the_shares_second_moment():
    """``driver_share_spread = "bootstrap"``: the weight's floor is s² + v, the second
    moment of a share about s with the resampled shares' variance v (E[S²] = E[S]² +
    Var S), at most 1; without draws s²; the default ``"off"`` (unchanged runs)."""
    from fluxpart import uncertainty
    rng, air, soil = _two_fits(seed=6, n=1400)
    nee = 0.25 * air + 0.75 * soil + rng.laplace(0, 1.0, air.size)
    night = np.ones(air.size, bool)
    share = mixture_share(nee, night, soil, air)
    draws = mixture_share_draws(nee, night, soil, air, _index(air.size))
    moment = uncertainty.share_second_moment(share, draws)
    assert moment == pytest.approx(share ** 2 + np.var(draws))
    assert moment > share ** 2
    assert uncertainty.share_second_moment(0.2, []) == pytest.approx(0.04)
    assert uncertainty.share_second_moment(1.0, [0.0, 1.0]) == 1.0
    assert Config().driver_share_spread == "off"
    assert Config(driver_share_spread="bootstrap").driver_share_spread == "bootstrap"
    assert uncertainty.record_inputs.__kwdefaults__["driver_share_spread"] == "off"


@pytest.mark.parametrize("share, shown", [(0.0, False), (0.3, True)])
def test_a_mixture_is_shown_only_where_one_was_planted(share, shown):
    """Known truth: night NEE = (1 - s) Reco(soil) + s Reco(air) + Laplace noise; a share
    of 0.3 of the air-temperature fit is shown (its 95 % interval, s ± 1.96 sd of the
    resampled nights, excludes 0), a respiration on soil temperature alone is not
    (Efron & Tibshirani 1993, ch. 13: the normal bootstrap interval (m))."""
    rng, air, soil = _two_fits(seed=7, n=2000)
    nee = (1 - share) * soil + share * air + rng.laplace(0, 1.0, air.size)
    night = np.ones(air.size, bool)
    found = mixture_share(nee, night, soil, air)
    draws = mixture_share_draws(nee, night, soil, air, _index(air.size), clip=False)
    assert mixture_shown(found, draws) is shown
    assert mixture_shown(found, []) is False


def test_the_mixture_prior_gives_the_day_records_half_the_weight_where_a_mixture_is_shown():
    """``driver_day_prior = "mixture"``: the daytime records' weight is max(w, 1/2) where
    the share is shown (the equal prior of model averaging, Burnham & Anderson 2002,
    ch. 4 (m)); None (the night weight, as the default) where it is not."""
    from fluxpart.uncertainty import mixture_day_weight
    shown_draws = np.full(SHARE_DRAWS, 0.2) + np.linspace(-0.02, 0.02, SHARE_DRAWS)
    wide_draws = np.linspace(0.0, 0.4, SHARE_DRAWS)
    assert mixture_day_weight(0.04, 0.2, shown_draws) == 0.5
    assert mixture_day_weight(0.7, 0.2, shown_draws) == 0.7
    assert mixture_day_weight(0.04, 0.2, wide_draws) is None
    assert mixture_day_weight(0.04, 0.0, np.zeros(SHARE_DRAWS)) is None
    assert Config(driver_day_prior="mixture").driver_day_prior == "mixture"


def test_a_result_without_the_day_prior_recorded_was_computed_with_the_night_weight():
    """``driver_day_prior`` came in 0.33.0 with the default "night" and is written into
    every result since; its default became "mixture" in 0.38.0. A folder that does not
    name it (0.32.0 or before) computed as "night": ``verify`` and ``load`` must take
    that, not the new default (a rerun with "mixture" widens the partitioned intervals
    where the nights show a mixture, so the folder would be "NOT reproduced"). Audit
    contract (DESIGN.md §4.1)."""
    from fluxpart.config import Config, implied_settings

    recorded = Config().to_dict()
    assert recorded["driver_day_prior"] == "mixture"        # written, so never implied
    assert "driver_day_prior" not in implied_settings(recorded)
    del recorded["driver_day_prior"]
    value, reason = implied_settings(recorded)["driver_day_prior"]
    assert value == "night" and "0.33.0" in reason


def test_a_one_temperature_respiration_is_judged_a_mixture_at_about_the_tests_level():
    """Known truth: night NEE = Reco(soil) + Laplace noise (Hollinger & Richardson 2005),
    200 independent noise draws on the same nights. The share is 0 and sits at the clip
    of [0, 1], where a bootstrap is degenerate (Andrews 2000, Econometrica 68, 399–405
    (m)); the one-sided test s − 1.96 sd > 0 must still wrongly show a mixture in about
    2.5 % of draws (the normal bootstrap interval, Efron & Tibshirani 1993, ch. 13 (m)):
    at most 12 of 200 (binomial: more than 12 has probability 0.002 at a rate of 2.5 %,
    0.82 at 8 %). Measured in round review87 on 400 such draws: 9 (2.25 %)."""
    rng, air, soil = _two_fits(seed=11, n=1000)
    night = np.ones(air.size, bool)
    index = _index(air.size)
    shown = 0
    for _ in range(200):
        nee = soil + rng.laplace(0, 1.0, air.size)
        shown += mixture_shown(mixture_share(nee, night, soil, air),
                               mixture_share_draws(nee, night, soil, air, index, clip=False))
    assert shown <= 12


def test_the_mixture_test_takes_the_spread_of_the_unclipped_draws():
    """The test is that of the unconstrained estimate (the weighted median of the ratios):
    clipped draws spread less (a 1-Lipschitz map cannot raise a variance) and most near a
    clip, where a bootstrap of an estimate held to a boundary is not consistent (Andrews
    2000, Econometrica 68, 399–405 (m)). On one-temperature nights the unclipped draws
    reach below 0 and the clipped ones are exactly their clip; draws of a share of 0.55
    spread ± 0.3 and piled at 1 when clipped would show a mixture their own spread does
    not (0.55 − 1.96 · 0.3 < 0; Efron & Tibshirani 1993, ch. 13 (m))."""
    rng, air, soil = _two_fits(seed=12, n=1000)
    nee = soil + rng.laplace(0, 1.0, air.size)
    night = np.ones(air.size, bool)
    raw = mixture_share_draws(nee, night, soil, air, _index(air.size), clip=False)
    clipped = mixture_share_draws(nee, night, soil, air, _index(air.size))
    assert (raw < 0).any() and (raw > 0).any()
    np.testing.assert_array_equal(clipped, np.clip(raw, 0.0, 1.0))
    assert clipped.std() < raw.std()
    spread = 0.55 + 0.3 * np.random.default_rng(3).standard_normal(SHARE_DRAWS)
    spread = 0.55 + 0.3 * (spread - spread.mean()) / spread.std()
    assert mixture_shown(0.55, np.clip(spread, 0.0, 1.0))
    assert not mixture_shown(0.55, spread)
