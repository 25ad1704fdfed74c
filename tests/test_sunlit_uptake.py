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


def test_a_year_whose_warm_season_was_lost_is_not_judged():
    """A canopy whose uptake lies in four warm months alone (a crop: maize takes up CO2
    from June to September, fact of the trade (m)) with those months' NEE lost (an
    analyser's outage of a summer) holds only the dormant canopy's release in the sun: it
    was named as another gas's flux (review59: the invented maize example so cut, 2.4 %
    of 1232 warm, bright records below 0). A methane flux measured through the year stays
    named, and so does one whose outage leaves a tenth of each warm month
    (:data:`MIN_MONTH_COVERAGE`) or takes one month alone."""
    from fluxpart.sunlit_uptake import MIN_MONTH_COVERAGE

    index, _, rg, tair, potential, rng = _year()
    months = index.month.to_numpy()
    crop = (months >= 6) & (months <= 9)
    reco = 2.0 * np.exp(308.56 * (1 / 56.02 - 1 / (tair + 273.15 - 227.13)))
    gpp = np.where(crop, 30.0 * rg / (rg + 400.0), 0.0)      # a rectangular hyperbola (m)
    nee = reco - gpp + rng.normal(0.0, 0.5 + 0.15 * np.abs(reco - gpp))
    nee[rng.random(len(nee)) < 0.35] = np.nan
    assert no_sunlit_uptake(nee, rg, tair, potential, index) is None
    outage = np.where(crop, np.nan, nee)
    bright = np.isfinite(outage) & (rg >= 300) & (tair >= 5)
    assert bright.sum() >= 480 and (outage[bright] < 0).mean() < UPTAKE_SHARE  # would fire
    assert no_sunlit_uptake(outage, rg, tair, potential, index) is None
    methane = 30.0 * 3.0 ** ((tair - 15.0) / 10.0) + rng.normal(0.0, 3.0, len(tair))
    methane[np.isnan(nee)] = np.nan
    assert no_sunlit_uptake(methane, rg, tair, potential, index) is not None
    assert no_sunlit_uptake(np.where(crop, np.nan, methane), rg, tair, potential,
                            index) is None                  # not caught: said in checks.md
    # an outage leaving the first eight days of each warm month (of which 65 % kept: 17 %
    # of the month's warm, bright records) is judged
    kept = ~crop | (index.day.to_numpy() <= 8)
    assert 0.65 * 8 / 30 > MIN_MONTH_COVERAGE
    assert no_sunlit_uptake(np.where(kept, methane, np.nan), rg, tair, potential,
                            index) is not None
    # one month lost, July, the sunniest, leaves a record judged (MEASURED_MONTHS_SHARE)
    assert no_sunlit_uptake(np.where(months == 7, np.nan, methane), rg, tair, potential,
                            index) is not None
