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
from fluxpart.driver_mixture import MIN_RECORDS, mixture_share


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
