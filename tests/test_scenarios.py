"""Generated known-truth site-years (fluxpart.scenarios) and a small calibration run (issue 11).

The data are invented (known-truth recovery only); the checks are facts of the trade
or of the calendar, named beside each.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart import scenarios
from fluxpart.config import Config
from fluxpart.constants import CARBON_MOLAR_MASS
from fluxpart.errors import ConfigError
from fluxpart.pipeline import process
from fluxpart.site import Site
from fluxpart.uncertainty import gap_runs

COLUMNS = ["nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh", "nee_flag"]


@pytest.fixture(scope="module")
def one_of_each():
    """One site-year of every archetype (seeds 0-6)."""
    return {year.scenario.archetype: year for year in scenarios.site_years(range(7))}


def test_every_archetype_is_drawn_once_per_cycle(one_of_each):
    """Seeds 0-6 give the seven archetypes; the same seed gives the same frame."""
    assert set(one_of_each) == set(scenarios.ARCHETYPES)
    again = scenarios.generate(3)
    pd.testing.assert_frame_equal(again.frame, one_of_each[again.scenario.archetype].frame)
    assert scenarios.draw(10).parameters != scenarios.draw(3).parameters
    with pytest.raises(ConfigError, match="seed"):
        scenarios.draw(-1)


def test_layout_calendar_and_truth(one_of_each):
    """Canonical columns; a year has 365 or 366 days (Gregorian calendar); NEE = Reco - GPP."""
    for year in one_of_each.values():
        frame, truth = year.frame, year.truth
        assert list(frame.columns) == COLUMNS and isinstance(year.site, Site)
        step = year.scenario.interval_minutes
        days = 366 if pd.Timestamp(year.scenario.year, 12, 31).day_of_year == 366 else 365
        assert len(frame) == days * 1440 // step
        assert truth.index.equals(frame.index)
        np.testing.assert_allclose(truth["nee"], truth["reco"] - truth["gpp"])
        assert (truth["gpp"] >= 0).all() and (truth["reco"] > 0).all()
        # annual sums: 1 µmol m-2 s-1 over `step` minutes = step x 60 x 12.011e-6 g C m-2
        factor = step * 60 * CARBON_MOLAR_MASS * 1e-6
        assert year.annual_truth["gpp"] == pytest.approx(truth["gpp"].sum() * factor)
    assert len(one_of_each["gappy_leap_year_forest"].frame) == 17568     # 2020 is a leap year
    assert one_of_each["dry_savanna"].scenario.interval_minutes == 60
    assert one_of_each["southern_woodland"].site.latitude < 0


def test_seasons_follow_the_hemisphere(one_of_each):
    """Common practice: July is warmer than January in the north, colder in the south."""
    for name, sign in (("temperate_deciduous", 1), ("southern_woodland", -1)):
        tair = one_of_each[name].frame["tair"]
        july, january = tair[tair.index.month == 7].mean(), tair[tair.index.month == 1].mean()
        assert sign * (july - january) > 5, name


def test_twilight_photosynthesis_and_night_loss(one_of_each):
    """Twilight records (measured Rg < 10 W m-2 with the sun up) carry GPP; calm nights lose flux.

    Common practice: photosynthesis starts at first light; below the u* threshold the
    tower under-measures night respiration.
    """
    year = one_of_each["temperate_deciduous"]
    frame, truth = year.frame, year.truth
    summer = frame.index.month.isin([6, 7])
    twilight = summer & (frame["rg"] < 10) & (frame["rg"] > 2)
    assert truth.loc[twilight, "gpp"].mean() > 0.1
    night = (frame["rg"] < 2) & frame["nee"].notna()
    calm = night & (frame["ustar"] < 0.5 * year.scenario.parameters["ustar_threshold"])
    windy = night & (frame["ustar"] > year.scenario.parameters["ustar_threshold"])
    loss = (frame["nee"] - truth["nee"])
    assert loss[calm].mean() < loss[windy].mean() - 0.3


def test_heavy_gaps_hold_weeks_long_outages(one_of_each):
    """The gappy archetype has at least two NEE gaps of 14 days or more."""
    year = one_of_each["gappy_leap_year_forest"]
    _, lengths = gap_runs(year.frame["nee"].isna().to_numpy())
    per_day = 1440 // year.scenario.interval_minutes
    assert (lengths >= 14 * per_day).sum() >= 2
    assert 0.3 < year.frame["nee"].isna().mean() < 0.7


def test_calibration_on_a_few_site_years():
    """Two generated site-years (seeds 7-8): annual errors within loose bounds, intervals sane.

    Loose bounds for a fast test (the benchmark tests/benchmarks/bench_calibration.py
    measures coverage over many site-years): |NEE error| < 40 g C m-2, nighttime GPP
    and Reco within 15 %, daytime within 30 %, and at least one of the two NEE intervals
    containing the truth.
    """
    covered = 0
    for year in scenarios.site_years(range(7, 9)):
        result = process(year.frame, year.site, Config(ustar_bootstrap_draws=20))
        row = result.annual.loc[year.scenario.year]
        truth = year.annual_truth
        assert abs(row["nee"] - truth["nee"]) < 40
        for flux, limit in (("gpp_nighttime", 0.15), ("reco_nighttime", 0.15),
                            ("gpp_daytime", 0.30), ("reco_daytime", 0.30)):
            true = truth[flux.split("_")[0]]
            assert abs(row[flux] / true - 1) < limit, (year.scenario.archetype, flux)
            assert row[f"{flux}_ci95_low"] < row[flux] < row[f"{flux}_ci95_high"]
        width = row["nee_ci95_high"] - row["nee_ci95_low"]
        assert 0 < width < 200
        covered += row["nee_ci95_low"] <= truth["nee"] <= row["nee_ci95_high"]
    assert covered >= 1


def test_gradual_loss_shape():
    """The gradual shape measures 99 % of the flux at its u99 and fades monotonically.

    Papale et al. (2006) (m): the moving point test takes the threshold where the night
    flux reaches 99 % of its plateau, so the 99 % u* is the threshold a detector should
    read. 95 % at sqrt(ln 18 / ln 90) = 0.801 of u99 and 1 - 0.9 in calm air follow from
    the stated formula 1 - 0.9 exp(-(u*/s)^2) (invented known-truth form).
    """
    u99 = 0.3
    share = scenarios.gradual_share(np.array([0.0, 0.801 * u99, u99, 2 * u99]), u99)
    np.testing.assert_allclose(share, [0.1, 0.95, 0.99, 1.0], atol=2e-4)
    grid = scenarios.gradual_share(np.linspace(0, 2 * u99, 101), u99)
    assert (np.diff(grid) > 0).all()


def test_gradual_loss_changes_only_the_night_loss(one_of_each):
    """Known-truth recovery: the gradual option changes the loss, nothing else; default unchanged.

    Same random numbers: the measured NEE of the two shapes differs by exactly the true
    NEE times the difference of the measured shares (noise, spikes and gaps alike), by
    day not at all; the default (`"step"`) gives the frame it gave before.
    """
    step = one_of_each["temperate_deciduous"]
    seed = step.scenario.seed
    again = scenarios.generate(seed, night_loss="step")
    pd.testing.assert_frame_equal(again.frame, step.frame)
    gradual = scenarios.generate(seed, night_loss="gradual")
    pd.testing.assert_frame_equal(gradual.frame.drop(columns="nee"), step.frame.drop(columns="nee"))
    expected = step.truth["nee"].to_numpy() * (gradual.measured_share - step.measured_share)
    difference = (gradual.frame["nee"] - step.frame["nee"]).to_numpy()
    measured = np.isfinite(difference)
    np.testing.assert_allclose(difference[measured], expected[measured], atol=1e-9)
    threshold = step.scenario.parameters["ustar_threshold"]
    ustar = step.frame["ustar"].to_numpy()
    above = np.isfinite(ustar) & (ustar >= threshold)
    assert (step.measured_share[above] == 1).all()
    assert (gradual.measured_share[above] >= 0.99).all()        # the 99 % plateau above u99
    lost_above = (gradual.measured_share < 1) & (ustar >= 0.8 * threshold)
    assert lost_above.sum() > 100            # the gradual loss reaches the kept side
    with pytest.raises(ConfigError, match="night_loss"):
        scenarios.generate(seed, night_loss="ramp")
