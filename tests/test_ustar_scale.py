"""u* beyond the surface layer's bounds at night (round mistakes52).

Source: the logarithmic wind profile u* = κU / ln((z - d) / z0), κ = 0.41 (Stull 1988,
ch. 9 (m)); roughness lengths of grass 0.01-0.05 m (Garratt 1992, ch. 3 (m)). The
records are invented: a windy grass site's nights' wind drawn log-normal.
"""
import numpy as np
import pandas as pd

from fluxpart import ustar_scale


def _windy_grass_nights(seed=0):
    """A year of 30-minute records, every record night: u* of a 3-m mast over grass
    (z0 = 0.05 m) under a nights' wind of median 3.5 m s-1 (an exposed site's, (m))."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=17520, freq="30min")
    wind = 3.5 * np.exp(rng.normal(0.0, 0.5, index.size))
    ustar = 0.41 * wind / np.log(3.0 / 0.05)
    return ustar, np.ones(index.size, dtype=bool), index


def test_a_windy_grass_site_is_not_named_and_its_ustar_in_km_per_hour_is():
    ustar, night, index = _windy_grass_nights()
    assert 0.3 < np.median(ustar) < 0.4              # κU / ln(60) of a 3.5 m s-1 median
    assert ustar_scale.ustar_beyond_surface_layer(ustar, night, index, "short") is None
    text = ustar_scale.ustar_beyond_surface_layer(ustar * 3.6, night, index, "short",
                                                  "u_fric")
    assert text is not None and "'u_fric'" in text and "12 months" in text
    assert "km h-1" in text
    # a forest's bounds are wider: a calm site's (median wind 2 m s-1) km h-1 pass there
    calm = ustar * 2.0 / 3.5 * 3.6
    assert ustar_scale.ustar_beyond_surface_layer(calm, night, index, "tall") is None
    assert ustar_scale.ustar_beyond_surface_layer(calm, night, index, "short") is not None


def test_one_stormy_month_is_not_named_and_half_a_year_from_a_program_change_is():
    ustar, night, index = _windy_grass_nights(1)
    storm = np.where(index.month == 12, ustar * 3.0, ustar)   # a month of gales
    assert len(ustar_scale.months_beyond_surface_layer(storm, night, index, "short")) == 1
    assert ustar_scale.ustar_beyond_surface_layer(storm, night, index, "short") is None
    later = np.where(index.month >= 7, ustar * 3.6, ustar)
    text = ustar_scale.ustar_beyond_surface_layer(later, night, index, "short")
    assert text is not None and "6 months (2021-07 .. 2021-12)" in text


# round mistakes57: a step up of the nights' u* as km h-1 from one day on. Source: the
# logarithmic profile above; roughness lengths of snow about 0.001 m and of grass 0.05 m
# (Garratt 1992, ch. 3 (m)); km h-1 = 3.6 m s-1 (SI).
def test_ustar_in_km_per_hour_from_a_program_change_is_named_over_a_calm_forest():
    ustar, night, index = _windy_grass_nights(2)
    calm = ustar * 0.6                           # a calm site, nights' median about 0.2
    later = np.where(index >= pd.Timestamp("2021-07-01"), calm * 3.6, calm)
    # within a forest's (and the default canopy's) bounds: the level alone names nothing
    assert ustar_scale.ustar_beyond_surface_layer(later, night, index, "tall") is None
    assert ustar_scale.ustar_step_up(calm, night, index) is None
    step = ustar_scale.ustar_step_up(later, night, index)
    assert step is not None and step["at"] == pd.Timestamp("2021-07-01")
    assert all(3.6 / 1.4 <= r <= 3.6 * 1.4 for r in step["ratios"])
    text = ustar_scale.ustar_stepped_to_kmh(later, night, index, "u_fric")
    assert "'u_fric'" in text and "from 2021-07-01" in text and "km h-1" in text


def test_snowmelt_a_harvest_and_a_fortnight_of_gales_are_not_named():
    ustar, night, index = _windy_grass_nights(3)
    wind = ustar * np.log(3.0 / 0.05) / 0.41
    # snow (z0 0.001 m) until 15 April, grass (0.05 m) after: u* steps up ln(3000)/ln(60)
    z0 = np.where(index < pd.Timestamp("2021-04-15"), 0.001, 0.05)
    melt = 0.41 * wind / np.log(3.0 / z0)
    assert 1.9 < np.log(3000.0) / np.log(60.0) < 2.0
    assert ustar_scale.ustar_step_up(melt, night, index) is None
    # a crop cut on 1 September: a step down, of about km h-1's size
    harvest = np.where(index >= pd.Timestamp("2021-09-01"), ustar / 3.6, ustar)
    assert ustar_scale.ustar_step_up(harvest, night, index) is None
    # gales for a fortnight: sudden, but not kept for six weeks
    gales = (index >= pd.Timestamp("2021-11-01")) & (index < pd.Timestamp("2021-11-15"))
    assert ustar_scale.ustar_step_up(np.where(gales, ustar * 3.6, ustar), night,
                                     index) is None


def test_km_per_hour_for_some_months_only_is_named_at_its_start():
    ustar, night, index = _windy_grass_nights(4)
    calm = ustar * 0.6
    spell = (index >= pd.Timestamp("2021-05-10")) & (index < pd.Timestamp("2021-10-01"))
    step = ustar_scale.ustar_step_up(np.where(spell, calm * 3.6, calm), night, index)
    assert step is not None and step["at"] == pd.Timestamp("2021-05-10")


def test_a_dry_seasons_calm_giving_way_to_fronts_is_not_named():
    # nights of a calm anticyclone (u* 0.08) and of fronts (0.40, a windy night's u* under
    # a 6 m s-1 wind over grass, kU/ln(60)): 85 % calm until July, 85 % windy after
    ustar, night, index = _windy_grass_nights(5)
    rng = np.random.default_rng(5)
    nights = index.normalize()
    windy_share = np.where(nights < pd.Timestamp("2021-07-01"), 0.15, 0.85)
    draw = pd.Series(rng.random(index.size), index=index).groupby(nights).transform("first")
    level = np.where(draw.to_numpy() < windy_share, 0.40, 0.08)
    regime = level * np.exp(rng.normal(0.0, 0.2, index.size))
    lo = regime[index < pd.Timestamp("2021-07-01")]
    hi = regime[index >= pd.Timestamp("2021-07-01")]
    assert np.median(hi) / np.median(lo) > 3.6 / 1.4          # the median steps as km h-1
    assert ustar_scale.ustar_step_up(regime, night, index) is None
    # the same record written in km h-1 from October: every night steps, and is named
    kmh = np.where(index >= pd.Timestamp("2021-10-01"), regime * 3.6, regime)
    step = ustar_scale.ustar_step_up(kmh, night, index)
    assert step is not None
    assert abs(step["at"] - pd.Timestamp("2021-10-01")) <= pd.Timedelta(days=2)

def test_two_months_a_year_apart_are_named_by_name_not_as_a_span():
    """Two months beyond the bounds, January and December, are listed as such: a span
    "2021-01 .. 2021-12" would read as the whole year (falsealarm58)."""
    ustar, night, index = _windy_grass_nights(2)
    ends = np.where(np.isin(index.month, (1, 12)), ustar * 3.6, ustar)
    text = ustar_scale.ustar_beyond_surface_layer(ends, night, index, "short")
    assert text is not None and "2 months (2021-01, 2021-12)" in text


# round review85: a windy season's onset steps the nights' u* as km h-1 would, but not the
# days'. Source: the log profile with the stable correction u* = κU / (ln(z/z0) + β z/L),
# β = 5 (Businger-Dyer form, Stull 1988, ch. 9 (m)); a monsoon's onset bringing overcast,
# windy, near-neutral nights after a dry season's calm, stable ones, while the days' wind
# rises far less (convective days before, the monsoon flow after: common knowledge of
# monsoon climates (m)). Sizes invented.
def _monsoon_site(seed, onset="2021-06-10"):
    """A year of 30-minute records, nights 18:00-06:00, at a 3-m mast over grass (z0 =
    0.05 m): nights' wind 1.2 m s-1 at z/L 0.5 before the onset and 3.0 m s-1 at z/L 0.05
    after, days' wind 3.0 and 5.0 m s-1 (neutral), each day's weather log-normal."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=17520, freq="30min")
    night = np.asarray((index.hour < 6) | (index.hour >= 18))
    wet = np.asarray(index.normalize() >= pd.Timestamp(onset))
    day_number = np.asarray((index.normalize() - index[0]).days)
    weather = np.exp(rng.normal(0.0, 0.35, day_number.max() + 1))[day_number]
    wind = (np.where(night, np.where(wet, 3.0, 1.2), np.where(wet, 5.0, 3.0)) * weather
            * np.exp(rng.normal(0.0, 0.3, index.size)))
    stability = np.where(night, np.where(wet, 0.05, 0.5), 0.0)
    return 0.41 * wind / (np.log(3.0 / 0.05) + 5.0 * stability), night, index


def test_a_monsoons_onset_is_not_named_and_its_ustar_in_km_per_hour_is():
    ustar, night, index = _monsoon_site(4)
    # the nights' step alone reads as km h-1: median and calm tail about 4-5 times
    before = ustar[night & (index < pd.Timestamp("2021-06-10"))
                   & (index >= pd.Timestamp("2021-05-27"))]
    after = ustar[night & (index >= pd.Timestamp("2021-06-10"))
                  & (index < pd.Timestamp("2021-06-24"))]
    assert 3.6 / 1.4 < np.median(after) / np.median(before) < 3.6 * 1.4
    assert 3.6 / 1.4 < np.quantile(after, 0.1) / np.quantile(before, 0.1) < 3.6 * 1.4
    # the days' median steps less than 2 times (5.0 / 3.0): no unit's step
    assert ustar_scale.ustar_step_up(ustar, night, index) is None
    # the nights alone (a record without daytime u*) are still judged by the nights' rule
    only_nights = np.where(night, ustar, np.nan)
    assert ustar_scale.ustar_step_up(only_nights, night, index) is not None
    # the same site written in km h-1 from 1 October: day and night step, and it is named
    kmh = np.where(index >= pd.Timestamp("2021-10-01"), ustar * 3.6, ustar)
    step = ustar_scale.ustar_step_up(kmh, night, index)
    assert step is not None and step["at"] == pd.Timestamp("2021-10-01")
    assert all(3.6 / 1.4 <= r <= 3.6 * 1.4 for r in step["day_ratios"])
    text = ustar_scale.ustar_stepped_to_kmh(kmh, night, index, "u_fric")
    assert "from 2021-10-01" in text and "its days' median too" in text



def test_the_days_are_said_to_step_only_where_they_were_judged():
    """The days' median is judged only where both spans either side hold daytime u*
    (:func:`fluxpart.ustar_scale.ustar_step_up`); the warning said "and its days' median
    too (1.7 and nan times)" where the 45 days before held none, though the days did not
    step (the nights alone named it, as for a record of night u* only; review88)."""
    ustar, night, index = _monsoon_site(4)
    late_days = np.where(night | (index >= pd.Timestamp("2021-05-20")), ustar, np.nan)
    step = ustar_scale.ustar_step_up(late_days, night, index)
    assert step is not None and np.isnan(step["day_ratios"][1])
    assert step["day_ratios"][0] < 3.6 / 1.4            # the days did not step as a unit
    text = ustar_scale.ustar_stepped_to_kmh(late_days, night, index, "u_fric")
    assert "from 2021-06-10" in text
    assert "days' median" not in text and "nan" not in text
