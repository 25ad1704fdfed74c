"""NEE that takes up no CO2 in a year's sunlight: another gas's flux (round mistakes47)."""
import numpy as np
import pandas as pd

from fluxpart import solar
from fluxpart.sunlit_uptake import STAGE, UPTAKE_SHARE, no_sunlit_uptake


def _year(seed=4):
    """An invented year at 49.3 deg N: clear-sky Rg (0.75 of the potential radiation, a
    broadband transmissivity, common practice (m)), air of 9 +- 9 degC through the
    seasons and +-4 K through the day, respiration by Lloyd and Taylor (1994, E0 =
    308.56 K, Tref 283.15 K, T0 227.13 K) at 2 µmol m-2 s-1, and a canopy's uptake by a
    rectangular hyperbola (alpha 0.05, beta 25 µmol m-2 s-1 in summer, Michaelis-Menten
    form (m)), random error 0.5 + 0.15 |NEE| (Richardson et al. 2006 (m))."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    potential = solar.potential_radiation(index, 49.3, 10.2, 1.0, 30)
    rg = 0.75 * potential
    day = index.day_of_year.to_numpy()
    hours = (index.hour + index.minute / 60).to_numpy()
    season = -np.cos(2 * np.pi * (day - 15) / 365.0)
    tair = 9.0 + 9.0 * season + 4.0 * np.sin(2 * np.pi * (hours - 9.0) / 24.0)
    reco = 2.0 * np.exp(308.56 * (1 / 56.02 - 1 / (tair + 273.15 - 227.13)))
    beta = 25.0 * np.clip(season, 0.0, None)
    gpp = 0.05 * beta * (2.1 * rg) / (0.05 * 2.1 * rg + beta + 1e-9)
    nee = reco - gpp
    nee = nee + rng.normal(0.0, 0.5 + 0.15 * np.abs(nee))
    nee[rng.random(len(nee)) < 0.35] = np.nan
    return index, nee, rg, tair, potential, rng


def test_a_canopy_is_quiet_and_a_methane_flux_is_named():
    index, nee, rg, tair, potential, rng = _year()
    assert no_sunlit_uptake(nee, rg, tair, potential, index) is None
    # a methane flux of a wetland, nmol m-2 s-1: always an emission (Q10 of 3 (m))
    methane = 30.0 * 3.0 ** ((tair - 15.0) / 10.0) + rng.normal(0.0, 3.0, len(tair))
    methane[np.isnan(nee)] = np.nan
    text = no_sunlit_uptake(methane, rg, tair, potential, index, {"nee": "flux_a"})
    assert text is not None and "'flux_a'" in text and "methane" in text
    assert STAGE.startswith("input (nee")


def test_half_a_year_a_water_flux_and_a_bare_soil_s_noise():
    """A record of the dormant half-year alone is not judged; a water vapour flux (no
    release at night) is left to the day-sign check; a bare soil's release of 1 µmol
    m-2 s-1 with its random error puts about 5 % below 0 (:data:`UPTAKE_SHARE`)."""
    index, nee, rg, tair, potential, rng = _year()
    methane = 30.0 + rng.normal(0.0, 3.0, len(tair))
    half = index.month >= 10
    assert no_sunlit_uptake(methane[half], rg[half], tair[half], potential[half],
                            index[half]) is None
    water = np.where(potential > 0, 0.4 * rg / 44.0, 0.05) + rng.normal(0, 0.2, len(rg))
    assert no_sunlit_uptake(water, rg, tair, potential, index) is None
    bare = 1.0 + rng.normal(0.0, 0.65, len(rg))
    share = float((bare < 0).mean())
    assert abs(share - UPTAKE_SHARE) < 0.03
