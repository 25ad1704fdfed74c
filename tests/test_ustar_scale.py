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


def test_two_months_a_year_apart_are_named_by_name_not_as_a_span():
    """Two months beyond the bounds, January and December, are listed as such: a span
    "2021-01 .. 2021-12" would read as the whole year (falsealarm58)."""
    ustar, night, index = _windy_grass_nights(2)
    ends = np.where(np.isin(index.month, (1, 12)), ustar * 3.6, ustar)
    text = ustar_scale.ustar_beyond_surface_layer(ends, night, index, "short")
    assert text is not None and "2 months (2021-01, 2021-12)" in text
