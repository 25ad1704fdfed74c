"""Global radiation too dim for any sky in a run of months (round mistakes29)."""
import numpy as np
import pandas as pd
import pytest

from fluxpart import demo, scenarios, solar
from fluxpart.preflight import _column_faults
from fluxpart.rg_dim import HIGH_SUN_POTENTIAL, dim_rg_months
from fluxpart.unit_checks import _PPFD_CLEAR_MIN

STEP = 30
#: broadband transmittance of a clear sky at high sun (common practice (m))
CLEAR = 0.75
#: eight oktas pass 1 - 0.75 (8/8)^3.4 of the clear sky (Kasten & Czeplak 1980, Solar
#: Energy 24:177-189 (m))
OVERCAST = 1.0 - 0.75 * (8.0 / 8.0) ** 3.4
#: PAR (400-700 nm) in W m-2 is about 0.46 of global radiation (common practice (m))
PAR_SHARE = 0.46
#: the albedo of a grassland, the reflected share of global radiation (about 0.2-0.25,
#: Oke 1987, Boundary Layer Climates, table 1.1 (m))
ALBEDO = 0.22


def _demo(step=STEP):
    frame = demo.site_year(0, interval_minutes=step)[0]
    site = demo.site()
    potential = solar.potential_radiation(frame.index, site.latitude, site.longitude,
                                          site.utc_offset, step)
    return frame, potential


def _invented_sky(days=365, latitude=49.3):
    """A year of an invented site at 49.3° N, clear every day (0.75 of the potential)."""
    index = pd.date_range("2021-01-01", periods=days * 48, freq=f"{STEP}min")
    potential = solar.potential_radiation(index, latitude, 10.2, 1.0, STEP)
    return potential * CLEAR, potential, index


def test_the_bound_lies_between_an_overcast_sky_and_a_clear_one():
    """The outside figures the rule rests on: a clear sky at 0.75 of the potential
    radiation is above the 0.5 bound, PAR, the reflected radiation and the thickest
    overcast below it."""
    assert CLEAR > _PPFD_CLEAR_MIN
    assert CLEAR * PAR_SHARE == pytest.approx(0.345) and CLEAR * PAR_SHARE < _PPFD_CLEAR_MIN
    assert CLEAR * ALBEDO < _PPFD_CLEAR_MIN
    assert CLEAR * OVERCAST == pytest.approx(0.1875)


def test_a_clear_year_and_an_overcast_spell_shorter_than_sixty_days_are_quiet():
    """Known truth on the invented clear sky: quiet; six weeks of eight oktas in summer
    (a monsoon's active spell lasts one to three weeks, the reader's argument (m)) are
    quiet too, since each run of months holds 60 days of high sun and so clear days."""
    rg, potential, index = _invented_sky()
    assert dim_rg_months(rg, potential, index) is None
    spell = (index >= "2021-06-10") & (index < "2021-07-22")
    assert dim_rg_months(np.where(spell, rg * OVERCAST, rg), potential, index) is None


def test_a_sensor_reading_the_reflected_radiation_from_july_is_named():
    """Known-truth recovery on the invented clear sky: from July the column holds the
    reflected radiation (the albedo of grass times the incoming; a four-component
    radiometer's channels swapped): named with its first month, the column and both
    brightest fractions. The same column all year is the reader's refusal, not this."""
    rg, potential, index = _invented_sky()
    july = index >= "2021-07-01"
    text = dim_rg_months(np.where(july, rg * ALBEDO, rg), potential, index,
                         {"rg": "Globalrad_1"})
    assert text is not None and "'Globalrad_1'" in text and "from 2021-07 to " in text
    assert "reach only 0.17 times" in text and "against 0.75" in text
    assert dim_rg_months(rg * ALBEDO, potential, index) is None
    # two separate runs (a sensor swapped twice) are named as two spans
    twice = ((index >= "2021-04-01") & (index < "2021-06-01")) | (index >= "2021-08-01")
    text = dim_rg_months(np.where(twice, rg * ALBEDO, rg), potential, index)
    assert text is not None and "from 2021-04 to 2021-05, 2021-08 to " in text


def test_a_clock_hours_off_is_left_to_the_clock_check():
    """Known truth: where the dim months are bright with the sun down (the stamps hours
    off the sun), the clock check speaks (its own module); this rule stays quiet."""
    rg, potential, index = _invented_sky()
    july = index >= "2021-07-01"
    late = np.roll(rg, 16)                     # eight hours late: sunlight at night
    assert dim_rg_months(np.where(july, late, rg), potential, index) is None


def test_the_demo_is_quiet_and_par_from_july_is_a_preflight_warning():
    """Known-truth recovery on the invented Quillmoor site at 30 and 60 min: its Rg as
    simulated is quiet; PAR in W m-2 (0.46 of Rg) from July, which moved the example's
    nighttime Reco by -11.8 g C m-2 without a word, and the reflected radiation from July
    (-36.2) are a preflight warning, not fatal, naming the column, with tair beside them
    (the thermometer's daily range does not excuse a sensor, round falsealarm56)."""
    for step in (30, 60):
        frame, potential = _demo(step)
        rg = frame["rg"].to_numpy(dtype=float)
        assert dim_rg_months(rg, potential, frame.index) is None
        july = frame.index >= "2021-07-01"
        for share in (PAR_SHARE, ALBEDO):
            screened = pd.DataFrame({"rg": np.where(july, rg * share, rg),
                                     "tair": frame["tair"]}, index=frame.index)
            found = [f for f in _column_faults(screened, potential, step,
                                               {"rg": "solar_down"})
                     if f.stage == "input (rg dim)"]
            assert len(found) == 1 and not found[0].fatal
            assert "'solar_down'" in found[0].message and "from 2021-07" in found[0].message
        clean = pd.DataFrame({"rg": rg}, index=frame.index)
        assert not [f for f in _column_faults(clean, potential, step)
                    if f.stage == "input (rg dim)"]


def test_a_short_high_sun_season_at_the_edge_of_the_year_is_quiet():
    """Known truth on a generated site-year at 56.4° N (scenarios seed 36): October holds
    49 records with the potential radiation above 600 W m-2 on ten days, their brightest
    1 % at 0.51 of it; a run counted in records rather than days of high sun was 0.01
    from a false alarm there. Runs now count 60 days with the sun high."""
    year = scenarios.generate(36)
    site = year.site
    assert site.latitude > 56.0
    potential = solar.potential_radiation(year.frame.index, site.latitude, site.longitude,
                                          site.utc_offset, STEP)
    october = (year.frame.index.month == 10) & (potential > HIGH_SUN_POTENTIAL)
    assert 20 <= october.sum() <= 100
    assert dim_rg_months(year.frame["rg"].to_numpy(dtype=float), potential,
                         year.frame.index) is None


def _bristow_campbell_year(seed=0):
    """An invented year at 21.5° N whose days' transmittance follows their temperature
    range by Bristow and Campbell (1984, Agric. For. Meteorol. 31:159-166 (m)):
    tau = A (1 - exp(-B dT^C)), A 0.7, B 0.008, C 2.4 (their form and C; A and B within
    their reported ranges (m)); ranges of 4-16 K, and 3-7 K from June to August (a
    monsoon's core: no day clearer than 0.40 of the potential radiation)."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2022-01-01", periods=365 * 48, freq=f"{STEP}min")
    potential = solar.potential_radiation(index, 21.5, 105.9, 7.0, STEP)
    days = np.arange(len(index)) // 48
    monsoon = np.isin(pd.date_range("2022-01-01", periods=365).month, [6, 7, 8])
    span = np.where(monsoon, rng.uniform(3, 7, 365), rng.uniform(4, 16, 365))
    tau = 0.7 * (1 - np.exp(-0.008 * span ** 2.4))
    hour = (np.arange(len(index)) % 48) / 2
    tair = 25.0 + span[days] / 2 * np.cos(2 * np.pi * (hour - 14.5) / 24)
    return potential * tau[days], potential, tair, index, tau, monsoon


def test_a_monsoon_of_three_overcast_months_is_quiet_where_the_thermometer_shows_it():
    """Known truth (round falsealarm56): three months without a day clearer than 0.40 of
    the potential radiation (a monsoon's core; the fifth clean probe's rice paddy at
    21.5° N was named) are named without tair, as before; with tair, whose daily range is
    as narrow as the rest's overcast days (Bristow and Campbell 1984), quiet. PAR and the
    reflected radiation from July, with the same thermometer, are still named (with the
    monsoon's June beside them: a run of months holds the sensor's and the sky's)."""
    rg, potential, tair, index, tau, monsoon = _bristow_campbell_year()
    assert tau[monsoon].max() < _PPFD_CLEAR_MIN < tau[~monsoon].max()
    assert dim_rg_months(rg, potential, index) is not None
    assert dim_rg_months(rg, potential, index, tair=tair) is None
    july = index >= "2022-07-01"
    for share in (PAR_SHARE, ALBEDO):
        text = dim_rg_months(np.where(july, rg * share, rg), potential, index, tair=tair)
        assert text is not None and " to 2022-12 (" in text


def test_each_dim_run_is_judged_on_its_own_so_the_monsoon_is_not_named_beside_a_fault():
    """Known truth (round rgdim57): the Bristow-Campbell year's monsoon (June-August,
    quiet with tair) and PAR in W m-2 or the reflected radiation from October, two
    separate runs of dim months: only the sensor's months are named; the monsoon's
    are not. One ratio over both runs named the monsoon too."""
    rg, potential, tair, index, tau, monsoon = _bristow_campbell_year()
    october = index >= "2022-10-01"
    for share in (PAR_SHARE, ALBEDO):
        text = dim_rg_months(np.where(october, rg * share, rg), potential, index, tair=tair)
        assert text is not None and "from 2022-10 to 2022-12 (3 month(s)" in text
        assert "2022-06" not in text and "2022-08" not in text
        # without the thermometer both runs are named, as before
        text = dim_rg_months(np.where(october, rg * share, rg), potential, index)
        assert text is not None and "from 2022-06 to 2022-08, 2022-10 to 2022-12" in text
