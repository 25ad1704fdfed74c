"""A night threshold of Rg that counts sunlit records with photosynthesis as night
(round mistakes39).

Outside facts: about 45-50 % of global radiation is photosynthetically active, at
4.57 µmol J-1 (McCree 1972 (m)), so 20 W m-2 of Rg carries a PPFD of about 40-46 µmol m-2
s-1, at or above the light compensation point of C3 leaves (about 10-40 µmol m-2 s-1,
textbook value (m)); night thresholds in use are 5-20 W m-2 (common practice (m)).
Known-truth recovery on the invented Quillmoor grassland of ``fluxpart.demo``.
"""
import numpy as np
import pytest

import fluxpart
from fluxpart import demo
from fluxpart.night_threshold import PHOTOSYNTHESIS_RG, twilight_as_night
from fluxpart.solar import potential_radiation


@pytest.fixture(scope="module")
def grassland():
    frame, _ = demo.site_year(seed=0)
    site = demo.site()
    potential = potential_radiation(frame.index, site.latitude, site.longitude, site.utc_offset)
    return frame, potential


def test_photosynthesis_limit_is_the_ppfd_of_leaves_light_compensation():
    ppfd = PHOTOSYNTHESIS_RG * np.array([0.45, 0.5]) * 4.57        # McCree (1972) (m)
    assert 40.0 <= ppfd.min() and ppfd.max() <= 46.0


def test_thresholds_in_use_are_quiet_and_higher_ones_named(grassland):
    """10 (default) and 20 W m-2 quiet; 30 and 50 named with the sunlit records they take
    as night (before round mistakes39 silent: nighttime Reco -31.7 and -69.3 g C m-2)."""
    frame, potential = grassland
    rg = frame["rg"].to_numpy()
    assert twilight_as_night(rg, potential, 10.0) == []
    assert twilight_as_night(rg, potential, 20.0) == []
    for threshold in (30.0, 50.0):
        [text] = twilight_as_night(rg, potential, threshold)
        sunlit = int(((potential > 0) & (rg >= 20.0) & (rg < threshold)).sum())
        assert f"counts {sunlit} records with the sun up" in text
        assert "night_rg_threshold = 10" in text


def test_a_threshold_raised_above_an_offset_at_night_is_quiet(grassland):
    """The preflight's own advice for a pyranometer reading 25 W m-2 in the dark: a
    threshold of 35 W m-2 is 10 above the offset, as the default is above 0."""
    frame, potential = grassland
    offset = frame["rg"].to_numpy() + 25.0
    assert twilight_as_night(offset, potential, 35.0) == []
    assert "Rg at night 25 W m-2" in twilight_as_night(offset, potential, 50.0)[0]


def test_the_preflight_names_it(grassland):
    """Wired into the preflight's findings (so `check` and `process` name it), not fatal."""
    from fluxpart.preflight import preflight

    frame, potential = grassland
    config = fluxpart.Config(night_rg_threshold=40.0)
    found = preflight(frame, frame, frame["rg"].to_numpy() < 40.0, potential,
                      np.zeros(len(frame), bool), demo.site().latitude, config, 30)
    [named] = [f for f in found if "night_rg_threshold = 40 W m-2 counts" in f.message]
    assert named.stage == "night mask" and not named.fatal


def test_a_threshold_inside_the_noise_of_deep_night_is_named(grassland):
    """With the sun 12 degrees or more below the horizon (nautical twilight's end,
    Seidelmann 1992 (m)) the sky gives no measurable Rg, so a threshold that a tenth of
    those records reach counts sensor noise as day (round mistakes43: 0.01, a threshold
    written in kW m-2, moved the example's NEE by 2.0 sigma, nighttime GPP by 2.9 sigma).
    The default and the top of the thresholds in use (20 W m-2) are quiet; 0.01 is named
    with its kW m-2 reading; 1 through the preflight where it has the sun's elevation."""
    from fluxpart.night_threshold import DEEP_NIGHT_ELEVATION, dark_as_day
    from fluxpart.preflight import preflight
    from fluxpart.solar import interval_midpoint_elevation

    frame, potential = grassland
    site = demo.site()
    elevation = interval_midpoint_elevation(frame.index, site.latitude, site.longitude,
                                            site.utc_offset, 30)
    rg = frame["rg"].to_numpy()
    deep = (elevation <= DEEP_NIGHT_ELEVATION) & np.isfinite(rg)
    assert deep.sum() > 4000 and np.nanpercentile(rg[deep], 99) < 10.0   # noise only
    assert dark_as_day(rg, elevation, 10.0) == dark_as_day(rg, elevation, 20.0) == []
    [text] = dark_as_day(rg, elevation, 0.01)
    share = round(100 * (rg[deep] >= 0.01).mean())
    assert f"reached by {share} % of the {int(deep.sum())} records" in text
    assert "0.01 kW m-2 = 10 W m-2" in text
    assert dark_as_day(np.where(deep, 0.0, rg), elevation, 0.01) == []   # a clean zero
    config = fluxpart.Config(night_rg_threshold=1.0)   # 0.01 reaches half: an offset's rule
    found = preflight(frame, frame, rg < 1.0, potential, np.zeros(len(frame), bool),
                      site.latitude, config, 30, sun_elevation=elevation)
    [named] = [f for f in found if "= 1 W m-2 is reached by" in f.message]
    assert named.stage == "night mask" and not named.fatal


def test_the_default_inside_deep_nights_noise_asks_for_the_offset_not_the_default():
    """Before review52 a pyranometer reading 8 W m-2 at deep night (past nautical
    twilight the sky gives no measurable Rg, Seidelmann 1992 (m)) with a scatter of 2
    W m-2 was named at the default 10 W m-2, with the remedy "set night_rg_threshold =
    10 (the default)" it already had. Where the default lies inside the noise, the offset
    (the deep-night median) and the noise's 99th percentile are named instead."""
    from fluxpart.night_threshold import DEEP_NIGHT_ELEVATION, dark_as_day

    elevation = np.tile(np.linspace(-40.0, 40.0, 160), 4)
    deep = elevation <= DEEP_NIGHT_ELEVATION
    noise = np.random.default_rng(0).normal(0.0, 2.0, elevation.size)
    rg = np.where(deep, 8.0 + noise, 100.0)
    default = fluxpart.Config().night_rg_threshold
    share = (rg[deep] >= default).mean()
    assert 0.1 <= share < 0.5                   # named here, not by the offset rule
    [text] = dark_as_day(rg, elevation, default)
    assert f"median {np.median(rg[deep]):.3g} W m-2" in text
    assert f"above the {np.percentile(rg[deep], 99):.3g} W m-2 of its noise" in text
    assert "(the default)" not in text
    quiet = np.where(deep, noise / 4, 100.0)
    [low] = dark_as_day(quiet, elevation, 0.01)
    assert f"night_rg_threshold = {default:g} (the default)" in low
    # the value it offers below the default, above the noise's 99th percentile, is quiet
    above = np.percentile(quiet[deep], 99)
    assert f"above the {above:.3g} W m-2 of the noise" in low
    assert dark_as_day(quiet, elevation, 1.01 * above) == []
