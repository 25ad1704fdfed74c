"""Tests of fluxpart.daytime_temperature (the daytime method's Reco on air temperature).

External facts: Lasslop et al. (2010, Global Change Biology 16:187-208) drive the daytime
method's Reco with air temperature; Lloyd & Taylor (1994) eq. 11 with Tref = 283.15 K and
T0 = 227.13 K (E0 = 308.56 K), written out here; double-exponential (Laplace) flux errors
(Hollinger & Richardson 2005, Tree Physiology 25:873-885); a canopy (leaf and stem) part of
ecosystem respiration follows air temperature while the soil part follows the soil's, a
fact of the trade. The known-truth recovery test uses the invented demo year (the only
place invented data is used).
"""
import dataclasses
import warnings

import numpy as np
import pytest
from test_driver_mixture import _eq11  # Lloyd & Taylor (1994) eq. 11, written out

import fluxpart
from fluxpart import demo
from fluxpart.config import Config, ConfigError
from fluxpart.daytime_temperature import (
    AIR,
    AVERAGE,
    CHOICES,
    DRIVER,
    MIXTURE,
    air_weight,
    night_shown,
    shifted_day,
    unchanged_note,
)


@pytest.mark.parametrize("setting, temperature, shown, expected", [
    (DRIVER, "tsoil", True, 0.0),
    (DRIVER, "tair", None, 0.0),
    (AIR, "tsoil", None, 1.0),
    (AIR, "tair", None, 0.0),            # a run on air temperature already is
    (AVERAGE, "tsoil", False, 0.5),      # the equal prior of model averaging
    (AVERAGE, "tair", None, 0.0),
    (MIXTURE, "tsoil", True, 0.5),       # only where the nights show a mixture
    (MIXTURE, "tsoil", False, 0.0),
    (MIXTURE, "tsoil", None, 0.0),
    (MIXTURE, "tair", True, 0.0),
])
def test_the_daytime_method_takes_air_only_where_the_run_reads_the_soil(
        setting, temperature, shown, expected):
    assert air_weight(setting, temperature, shown) == expected


def test_the_nights_show_a_planted_mixture_and_not_one_temperature():
    """Known truth: night NEE of Lloyd & Taylor eq. 11 on soil temperature alone, or with
    0.4 of it on air temperature, plus Laplace noise; the test of the mixture prior."""
    import pandas as pd
    rng = np.random.default_rng(3)
    n = 4000
    days = np.arange(n) / 20.0
    tair = 12 + 8 * np.sin(2 * np.pi * days / 365) + 4 * np.sin(2 * np.pi * days)
    tair = tair + pd.Series(rng.normal(0, 2.5, n)).rolling(20, min_periods=1).mean().to_numpy()
    tsoil = 12 + 6 * np.sin(2 * np.pi * (days - 10) / 365) + 0.8 * np.sin(
        2 * np.pi * (days - 0.2))
    soil, air = _eq11(tsoil, 3.0), _eq11(tair, 3.0)
    index = pd.Timestamp("2021-01-01") + pd.to_timedelta(np.arange(n) * 72, unit="min")
    night = np.ones(n, bool)
    one = soil + rng.laplace(0, 0.4, n)
    mixed = 0.6 * soil + 0.4 * air + rng.laplace(0, 0.4, n)
    assert night_shown(mixed, night, soil, air, index)
    assert not night_shown(one, night, soil, air, index)


@pytest.mark.parametrize("setting, temperature, fitted, shown, named", [
    (AIR, "tair", True, None, "this run drives it by air temperature"),
    (AVERAGE, "tair", False, None, "this run drives it by air temperature"),
    (AVERAGE, "tsoil", False, None, "could not be fitted on air temperature"),
    (MIXTURE, "tsoil", True, False, "the night records show no mixture"),
])
def test_a_set_daytime_temperature_that_changed_nothing_says_why(setting, temperature,
                                                                  fitted, shown, named):
    """A result records daytime_temperature as set; where it changed nothing (a run on
    air temperature, no air fit, no mixture shown) a warning says so and why (review89:
    it was silent, so a result of "average" on air temperature read as averaged)."""
    note = unchanged_note(setting, temperature, fitted, shown)
    assert note.startswith(f'[processing] daytime_temperature = "{setting}" changed nothing')
    assert named in note


@pytest.mark.parametrize("setting, temperature, fitted, shown", [
    (DRIVER, "tsoil", True, None), (DRIVER, "tair", False, None), (AIR, "tsoil", True, None),
    (AVERAGE, "tsoil", True, None), (MIXTURE, "tsoil", True, True)])
def test_no_note_where_the_setting_acted_or_is_the_default(setting, temperature, fitted,
                                                          shown):
    assert unchanged_note(setting, temperature, fitted, shown) == ""


def test_an_unknown_setting_is_refused():
    with pytest.raises(ValueError, match="daytime_temperature"):
        air_weight("soil", "tsoil")
    with pytest.raises(ConfigError, match='daytime_temperature = "soil" is not allowed'):
        Config(daytime_temperature="soil")
    assert set(CHOICES) == {"driver", "air", "average", "mixture"}


@dataclasses.dataclass
class _Day:
    """The fields of a daytime result that a shift moves."""

    gpp: np.ndarray
    reco: np.ndarray
    gpp_before: np.ndarray | None = None
    gpp_after: np.ndarray | None = None


def test_every_ustar_run_takes_the_central_runs_shift():
    """At weight 1 the central run becomes the air fit itself; another run moves by the
    central difference record by record, so the runs' spread is the threshold's alone; at
    weight 1/2 every run, the central one too, moves by half of it."""
    central = _Day(np.array([5.0, 6.0, 0.0]), np.array([2.0, 2.5, 1.5]))
    air = _Day(np.array([5.5, 7.0, 0.0]), np.array([2.5, 3.5, 1.5]))
    other = _Day(np.array([4.0, 5.0, 0.0]), np.array([1.8, 2.2, 1.4]),
                 np.array([4.1, 5.1, 0.1]), np.array([3.9, 4.9, -0.1]))
    assert shifted_day(central, central, air, 1.0) is air
    moved = shifted_day(other, central, air, 1.0)
    np.testing.assert_allclose(moved.gpp, [4.5, 6.0, 0.0])
    np.testing.assert_allclose(moved.reco, [2.3, 3.2, 1.4])
    np.testing.assert_allclose(moved.gpp_before, [4.6, 6.1, 0.1])
    np.testing.assert_allclose(moved.gpp_after, [4.4, 5.9, -0.1])
    np.testing.assert_allclose(moved.reco - other.reco, air.reco - central.reco)
    half = shifted_day(central, central, air, 0.5)
    np.testing.assert_allclose(half.reco, 0.5 * (central.reco + air.reco))
    np.testing.assert_allclose(half.gpp, 0.5 * (central.gpp + air.gpp))
    np.testing.assert_allclose(shifted_day(other, central, air, 0.5).reco,
                               [2.05, 2.7, 1.4])


# The growing season of the demo year (April to September): the checks below need days
# warmer than the soil and nights to fit on, not a whole year (round suitetrim: half the
# records, every assertion kept; the full year gave the same signs and order).
SEASON = slice("2021-04-01", "2021-09-30 23:30")


def _canopy_and_soil_year():
    """The invented demo year's growing season with its Reco replaced by a soil part on
    soil temperature plus a canopy part on air temperature (Lloyd & Taylor eq. 11 each,
    Rref 1.5 and 1.0) and Laplace noise: by day the air warms above the soil, and Reco
    with it."""
    frame, truth = demo.site_year(seed=5)
    frame, truth = frame.loc[SEASON], truth.loc[SEASON]
    rng = np.random.default_rng(5)
    # the planted temperatures where a sensor's record is missing: linear between readings
    tsoil, tair = (frame[c].interpolate(limit_direction="both") for c in ("tsoil", "tair"))
    reco = _eq11(tsoil, 1.5) + _eq11(tair, 1.0)
    nee = frame["nee"].to_numpy(dtype=float).copy()
    measured = np.isfinite(nee)
    nee[measured] = (reco[measured] - truth["gpp"].to_numpy(dtype=float)[measured]
                     + rng.laplace(0, 0.5, int(measured.sum())))
    frame = frame.copy()
    frame["nee"] = nee
    return frame, reco


def test_the_daytime_reco_on_air_follows_a_canopy_part_the_soil_misses():
    """Known truth through process(): with the run reading the soil, the daytime method
    on soil temperature misses the canopy part's daytime rise; on air temperature
    (``"air"``), or halfway (``"average"``), its annual Reco lies nearer the planted one. The nighttime method and NEE
    are unchanged, a run with the default is that of the release before (the setting is
    not written), and the setting is written where set."""
    frame, reco = _canopy_and_soil_year()
    factor = 1800 * 12.011e-6                        # g C m-2 per record per µmol m-2 s-1
    planted = float(reco.sum() * factor)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", fluxpart.FluxpartWarning)
        runs = {setting: fluxpart.process(frame, demo.site(), Config(
            ustar_bootstrap_draws=0, random_error_draws=50, respiration_driver="tsoil",
            daytime_temperature=setting)) for setting in (DRIVER, AIR, AVERAGE)}
    # the setting acted in each run: no warning that it changed nothing
    assert not [w for w in caught if "changed nothing" in str(w.message)]
    year = runs[DRIVER].annual.index[0]
    error = {setting: float(result.annual.loc[year, "reco_daytime"]) - planted
             for setting, result in runs.items()}
    assert error[DRIVER] < 0                         # the soil misses the day's rise
    assert abs(error[AIR]) < abs(error[DRIVER])
    assert abs(error[AVERAGE]) < abs(error[DRIVER])
    # the average lies halfway, GPP moves with Reco (NEE of the daytime method kept)
    reco = {s: float(r.annual.loc[year, "reco_daytime"]) for s, r in runs.items()}
    assert reco[AVERAGE] == pytest.approx(0.5 * (reco[DRIVER] + reco[AIR]), abs=1e-6)
    for column in ("nee", "gpp_nighttime", "reco_nighttime"):
        assert float(runs[AIR].annual.loc[year, column]) \
            == float(runs[DRIVER].annual.loc[year, column])
    assert "daytime_temperature" not in Config(respiration_driver="tsoil").to_dict()
    assert Config(daytime_temperature="air").to_dict()["daytime_temperature"] == "air"


def test_a_run_on_air_temperature_warns_that_the_setting_changed_nothing():
    """Known truth: the invented demo year's growing season with its soil temperature
    dropped drives Reco by air temperature; "average" there changes nothing, and the run
    says so, and its daytime GPP is that of the default run (review89: the result
    recorded "average" silently)."""
    frame, _ = demo.site_year(seed=5)
    frame = frame.loc[SEASON].drop(columns="tsoil")
    quick = {"ustar_bootstrap_draws": 0, "random_error_draws": 50}
    with pytest.warns(fluxpart.FluxpartWarning, match='daytime_temperature = "average" '
                      "changed nothing in this run: it acts only where Reco is driven by "
                      "soil temperature"):
        set_run = fluxpart.process(frame, demo.site(), Config(daytime_temperature=AVERAGE,
                                                              **quick))
    assert any("changed nothing" in text for text in set_run.warnings)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        default = fluxpart.process(frame, demo.site(), Config(**quick))
    assert not any("changed nothing" in text for text in default.warnings)
    year = default.annual.index[0]
    assert set_run.annual.loc[year, "gpp_daytime"] == default.annual.loc[year, "gpp_daytime"]
