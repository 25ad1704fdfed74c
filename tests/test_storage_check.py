"""The morning release of CO2 stored on calm nights (storage_check).

Known-truth recovery on invented records: CO2 respired below the sensor on a calm night
is held in the canopy air and leaves after sunrise, so the turbulent flux of the
following morning exceeds the ecosystem's exchange by the stored amount (the storage
term: Finnigan 2006, Agric. For. Meteorol. 136:108–113).
"""

import numpy as np
import pandas as pd

from fluxpart import storage_check


def _site_year(release, seed=3):
    """A year of half-hours: night 20-06 h; every third night calm; a morning release."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    hour = (index.hour + index.minute / 60.0).to_numpy()
    night = (hour >= 20) | (hour < 6)
    day_number = (index - index[0]).days.to_numpy() + np.where(hour >= 20, 1, 0)   # night -> its morning
    calm_night = (day_number % 3) == 0
    ustar = np.where(night & calm_night, 0.08, 0.45) + rng.uniform(0, 0.05, index.size)
    model = np.where(night, 3.0, 3.0 - 10.0 * np.sin(np.pi * (hour - 6) / 14).clip(0, None))
    morning = ~night & (hour < 9) & calm_night          # the 3 h after a calm night
    nee = model + rng.normal(0.0, 1.5, index.size) + np.where(morning, release, 0.0)
    nee[rng.random(index.size) < 0.3] = np.nan
    return index, nee, ustar, np.full(index.size, 0.2), night, model


def test_a_planted_morning_release_is_found_and_sized():
    """A release of 3 µmol m-2 s-1 for 3 h after every third night (about 26 g C m-2 a year
    in those records) is flagged, and its size is read within 20 %."""
    index, nee, ustar, threshold, night, model = _site_year(release=3.0)
    rows = storage_check.morning_release(nee, ustar, threshold, night, model,
                                         index.year, 30)
    assert len(rows) == 1 and rows[0]["flagged"]
    assert abs(rows[0]["excess"] - 3.0) < 0.6
    planted = 3.0 * 6 * 1800 * 12.011e-6 * rows[0]["calm_mornings"]
    assert abs(rows[0]["annual_excess"] - planted) < 0.3 * planted
    messages = storage_check.release_warnings(rows)
    assert len(messages) == 1 and "storage" in messages[0] and "calm nights" in messages[0]


def test_mornings_without_a_release_are_not_flagged():
    """The same year without a release: no warning, whatever the calm nights."""
    for seed in range(5):
        index, nee, ustar, threshold, night, model = _site_year(release=0.0, seed=seed)
        rows = storage_check.morning_release(nee, ustar, threshold, night, model,
                                             index.year, 30)
        assert rows and not any(row["flagged"] for row in rows)
        assert storage_check.release_warnings(rows) == []


def test_a_small_release_is_named_only_when_it_matters():
    """A release resolved statistically but below MIN_ANNUAL_EXCESS a year is not named."""
    index, nee, ustar, threshold, night, model = _site_year(release=0.5)
    rows = storage_check.morning_release(nee, ustar, threshold, night, model,
                                         index.year, 30)
    assert rows[0]["z"] > storage_check.MIN_Z
    assert rows[0]["annual_excess"] < storage_check.MIN_ANNUAL_EXCESS
    assert not rows[0]["flagged"]
