"""`check` foresees the run's stop at the nighttime E0 (round falsealarm52).

Invented records: a Lloyd and Taylor (1994) respiration, Rref * exp(E0 (1 / (Tref - T0)
- 1 / (T - T0))) with Tref 283.15 K and T0 227.13 K, under a measured flux's random error
(Richardson et al. 2006 (m)).
"""
import dataclasses

import numpy as np
import pandas as pd

from fluxpart.config import Config
from fluxpart.e0_foresight import e0_stops


def night_record(rref, noise, seed=0, days=120):
    """Hourly records of `days` from spring: nights only matter; soil and air 6-18 deg C."""
    index = pd.date_range("2022-03-01", periods=days * 24, freq="60min")
    rng = np.random.default_rng(seed)
    hour = index.hour.to_numpy()
    season = 12 + 5 * np.sin(2 * np.pi * np.arange(index.size) / (24 * 30))
    tair = season + 4 * np.cos(2 * np.pi * (hour - 15) / 24) + rng.normal(0, 0.5, index.size)
    tsoil = season + 1.5 * np.cos(2 * np.pi * (hour - 18) / 24)
    e0 = 200.0
    reco = rref * np.exp(e0 * (1 / (283.15 - 227.13) - 1 / (tair + 273.15 - 227.13)))
    nee = reco + rng.laplace(0, noise / np.sqrt(2), index.size)
    is_night = (hour < 5) | (hour >= 21)
    frame = pd.DataFrame({"nee": nee, "ustar": rng.uniform(0.1, 0.6, index.size),
                          "tair": tair, "tsoil": tsoil}, index=index)
    return frame, is_night, pd.Series([0.2], index=[2022])


def test_respiration_buried_in_noise_stops_the_run():
    # Reco about 0.1 against a random error of 0.4 (an Antarctic moss bank's 0.15
    # against 0.2 on a quarter of these nights): every fit fails
    frame, is_night, threshold = night_record(rref=0.1, noise=0.4)
    lines = e0_stops(frame, is_night, threshold, Config())
    assert len(lines) == 1
    assert lines[0].startswith("nighttime partitioning (E0): on tsoil and tair: E0 for year "
                               "2022: no acceptable Lloyd–Taylor window")
    assert "e0_fallback" in lines[0]
    # the fall-back set: the run goes on with it, nothing to foresee
    fallback = dataclasses.replace(Config(), e0_fallback=150.0)
    assert e0_stops(frame, is_night, threshold, fallback) == []


def test_a_respiration_above_its_noise_is_quiet():
    frame, is_night, threshold = night_record(rref=2.0, noise=0.3)
    assert e0_stops(frame, is_night, threshold, Config()) == []
    # the u* filter removes the calm nights as the run does: a threshold above every u*
    # leaves no night record, and the run stops
    assert e0_stops(frame, is_night, pd.Series([1.0], index=[2022]), Config())
