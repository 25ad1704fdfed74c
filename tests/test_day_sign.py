"""NEE negated by day only (round mistakes30)."""
import warnings

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart import demo, scenarios, solar
from fluxpart.day_sign import DAY_RELEASE_RATIO, STAGE, day_sign_reversed

#: Q10 of ecosystem respiration near 2 (Lloyd & Taylor 1994, Functional Ecology
#: 8:315-323 (m); common practice)
Q10 = 2.0


def _demo(seed=0, step=30, variant="c3"):
    frame = demo.site_year(seed, interval_minutes=step, variant=variant)[0]
    site = demo.site(variant)
    potential = solar.potential_radiation(frame.index, site.latitude, site.longitude,
                                          site.utc_offset, step)
    return frame, np.asarray(potential)


def _args(frame, potential, nee=None):
    return (frame["nee"].to_numpy(float) if nee is None else nee,
            frame["rg"].to_numpy(float), frame["tair"].to_numpy(float), potential,
            frame.index)


def test_the_day_release_bound_is_a_q10_of_two_over_six_kelvin():
    """The bound's argument: respiration with a Q10 of 2 at 6 K above the warmest nights
    (a soil's diurnal range at a few cm in summer (m)) is 1.5 times theirs."""
    assert Q10 ** (6.0 / 10.0) == pytest.approx(DAY_RELEASE_RATIO, abs=0.02)


def test_the_demo_negated_by_day_is_named_and_clean_years_are_quiet():
    """Known-truth recovery on invented data: the demo's NEE negated where Rg > 10 W m-2
    is named with its column; the demo as generated, grassland and maize, 30 and 60 min,
    and generated site-years are quiet."""
    frame, potential = _demo()
    rg = frame["rg"].to_numpy(float)
    flipped = np.where(rg > 10.0, -frame["nee"].to_numpy(float), frame["nee"].to_numpy(float))
    text = day_sign_reversed(*_args(frame, potential, flipped), {"nee": "co2_exchange"})
    assert text is not None and "'co2_exchange'" in text and "by day only" in text
    for step in (30, 60):
        for variant in ("c3", "c4"):
            assert day_sign_reversed(*_args(*_demo(0, step, variant))) is None
    for seed in (0, 7, 36):
        year = scenarios.generate(seed)
        step = int((year.frame.index[1] - year.frame.index[0]) / pd.Timedelta(minutes=1))
        potential = np.asarray(solar.potential_radiation(
            year.frame.index, year.site.latitude, year.site.longitude,
            year.site.utc_offset, step))
        assert day_sign_reversed(*_args(year.frame, potential)) is None


def test_a_water_vapour_flux_as_nee_is_named_with_that_cause():
    """Known truth on the demo's weather: an evaporation of 0.4 Rg over the latent heat of
    vaporisation, 44 kJ mol-1 at 25 degC (Monteith & Unsworth 2013 (m)), is 0-7 mmol m-2
    s-1 by day and near 0 at night. Mapped as NEE it was named as NEE negated by day
    only, a fix that writes a water flux as uptake; the message names the other quantity
    where the nights hold no respiration, and not for the demo's day-negated NEE."""
    frame, potential = _demo()
    rg = frame["rg"].to_numpy(float)
    flipped = np.where(rg > 10.0, -frame["nee"].to_numpy(float), frame["nee"].to_numpy(float))
    assert "water vapour" not in day_sign_reversed(*_args(frame, potential, flipped))
    rng = np.random.default_rng(4)
    water = 0.4 * np.clip(rg, 0.0, None) / 44.0 + 0.05 + rng.normal(0.0, 0.2, rg.size)
    water[np.isnan(frame["nee"].to_numpy(float))] = np.nan
    text = day_sign_reversed(*_args(frame, potential, water))
    assert text is not None and "water vapour flux (mmol m-2 s-1)" in text


def test_the_whole_column_negated_or_some_months_are_left_to_their_checks():
    """A column negated at every hour has its nights an uptake (the reader's refusal);
    negated from July only leaves months falling with light (the month check's): this
    check names neither."""
    frame, potential = _demo()
    nee = frame["nee"].to_numpy(float)
    assert day_sign_reversed(*_args(frame, potential, -nee)) is None
    july = np.asarray(frame.index >= "2021-07-01")
    assert day_sign_reversed(*_args(frame, potential, np.where(july, -nee, nee))) is None


def test_a_dormant_canopy_releasing_by_day_is_quiet():
    """Known truth on an invented bare field at 49.3° N: no photosynthesis, respiration of
    2 µmol m-2 s-1 at 10 °C with a Q10 of 2 on a temperature with a 6 K diurnal range and
    a seasonal course, plus noise; its day release follows temperature, not light."""
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    potential = np.asarray(solar.potential_radiation(index, 49.3, 10.2, 1.0, 30))
    rng = np.random.default_rng(1)
    day = index.day_of_year.to_numpy()
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    tair = 10.0 - 10.0 * np.cos(2 * np.pi * (day - 15) / 365) + 3.0 * np.sin(
        2 * np.pi * (hour - 9.0) / 24.0)
    rg = potential * rng.uniform(0.2, 0.78, index.size)
    nee = 2.0 * Q10 ** ((tair - 10.0) / 10.0) + rng.normal(0.0, 0.5, index.size)
    assert day_sign_reversed(nee, rg, tair, potential, index) is None


def test_process_warns_of_the_demo_negated_by_day():
    """The preflight names it in the run's warnings (before: only the partitionings'
    disagreement, with the annual NEE +1063 against -241 g C m-2)."""
    frame, _ = _demo()
    frame = frame.copy()
    frame.loc[frame["rg"] > 10.0, "nee"] *= -1.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = fluxpart.process(frame, demo.site())
    assert any(w.startswith(STAGE) for w in result.warnings)
