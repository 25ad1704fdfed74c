"""Records of another file spliced into the record (round mistakes44)."""
import numpy as np
import pandas as pd

from fluxpart.preflight import _column_faults
from fluxpart.spliced_records import FILE_STAGE, STAGE, file_joint, spliced_records

#: Thermal diffusivity of a moist mineral soil [m2 s-1], about 0.5e-6 (Campbell & Norman
#: 1998, table 8.2 (m)); the daily damping depth d = sqrt(2 kappa / omega) follows.
_DIFFUSIVITY = 0.5e-6
_OMEGA = 2 * np.pi / 86400.0


def _site(days=120, mean=12.0, seed=0):
    """Invented half-hourly air and 5-cm soil temperatures of a site: a daily wave of 6 K
    in the air with weather of a few K, and the soil that heat conduction gives at 5 cm,
    T(z, t) = mean + A exp(-z/d) sin(omega t - z/d) (Campbell & Norman 1998, eq. 8.6 (m)),
    with the weather's slow part."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-05-01", periods=days * 48, freq="30min")
    seconds = (index - index[0]).total_seconds().to_numpy()
    depth = np.sqrt(2 * _DIFFUSIVITY / _OMEGA)
    weather = np.convolve(rng.normal(0, 0.6, seconds.size), np.ones(96) / 96 ** 0.5, "same")
    air = mean + 6.0 * np.sin(_OMEGA * seconds) + weather + rng.normal(0, 0.3, seconds.size)
    soil = (mean + 6.0 * np.exp(-0.05 / depth) * np.sin(_OMEGA * seconds - 0.05 / depth)
            + 0.8 * weather)
    return index, air, np.round(soil, 2)


def test_damping_depth_of_the_daily_wave_is_about_a_tenth_of_a_metre():
    """The soil's daily damping depth, sqrt(2 kappa / omega), is about 0.12 m for a
    diffusivity of 0.5e-6 m2 s-1 (Campbell & Norman 1998, ch. 8 (m)): a 5-cm soil keeps
    two thirds of the surface's daily swing and changes by under 1 K a half-hour."""
    depth = np.sqrt(2 * _DIFFUSIVITY / _OMEGA)
    assert 0.10 < depth < 0.13
    index, air, soil = _site()
    assert np.nanmax(np.abs(np.diff(soil))) < 1.0


def test_a_pasted_month_is_named_and_a_storm_or_a_sensor_swap_is_not():
    """Known-truth recovery: a month of another invented site (10 K warmer, its own
    weather) pasted in is named at both joints, through the preflight too; one storm
    (air -6 K and soil -2 K in a record, rain on a warm soil) and a soil probe replaced
    with a 3 K offset (the soil steps alone) are not."""
    index, air, soil = _site()
    assert spliced_records(air, soil, index) is None
    storm = air.copy(), soil.copy()
    storm[0][3000:] -= 6.0
    storm[1][3000:] -= 2.0
    assert spliced_records(*storm, index) is None
    swapped = soil.copy()
    swapped[4000:] += 3.0
    assert spliced_records(air, swapped, index) is None
    # a deep probe (a 5-day mean, to 0.01 K) whose reading jumps by 0.3 K at two of the
    # air's largest changes: 3 times its own changes but no soil of another place
    year, year_air, year_soil = _site(days=365)
    deep = np.round(pd.Series(year_soil).rolling(240, center=True).mean().bfill().ffill()
                    .to_numpy(), 2)
    order = np.argsort(np.abs(np.diff(year_air)))[::-1] + 1
    jumps = [order[0], next(j for j in order if abs(j - order[0]) > 48)]
    noisy = deep.copy()
    noisy[jumps] += 0.3
    assert spliced_records(year_air, noisy, year) is None
    _, other_air, other_soil = _site(mean=22.0, seed=1)
    pasted_air, pasted_soil = air.copy(), soil.copy()
    month = slice(2000, 2000 + 30 * 48 + 7)      # joints at 7:00 and 10:30
    pasted_air[month], pasted_soil[month] = other_air[month], other_soil[month]
    text = spliced_records(pasted_air, pasted_soil, index)
    assert text is not None and "at 2 records" in text
    assert f"{index[2000]:%Y-%m-%d %H:%M}" in text
    assert f"{index[month.stop]:%Y-%m-%d %H:%M}" in text
    # a gap at one joint: the step over it is not judged, one joint is no splice
    gapped_air = pasted_air.copy()
    gapped_air[1999] = np.nan
    assert spliced_records(gapped_air, pasted_soil, index) is None
    screened = pd.DataFrame({"tair": pasted_air, "tsoil": pasted_soil}, index=index)
    stages = [finding.stage for finding in _column_faults(screened, None, 30)]
    assert STAGE in stages


def test_one_record_of_both_sensors_off_and_back_is_no_splice():
    """A logger's glitch (a power dip read by both sensors) puts one record of air and
    soil temperature 8 K off and back: two steps in a row, no stretch of another file
    (review55: named as two joints of a pasted stretch). A pasted month is still named
    beside such a glitch."""
    index, air, soil = _site()
    glitched_air, glitched_soil = air.copy(), soil.copy()
    glitched_air[3000] += 8.0
    glitched_soil[3000] += 8.0
    assert spliced_records(glitched_air, glitched_soil, index) is None
    _, other_air, other_soil = _site(mean=22.0, seed=1)
    month = slice(1000, 1000 + 30 * 48 + 7)
    glitched_air[month], glitched_soil[month] = other_air[month], other_soil[month]
    text = spliced_records(glitched_air, glitched_soil, index)
    assert text is not None and "at 2 records" in text


def test_two_lone_steps_a_year_apart_are_no_pasted_stretch():
    """Two joints bound a pasted stretch; two storms' steps 300 days apart are two events,
    not a stretch (round lead49: a trial's subarctic soil stepped at its snow model's start
    and 22 months later and was named), while the same steps 30 or 150 days apart are
    named."""
    index, air, soil = _site(days=365)

    def stepped(first, second):
        warm_air, warm_soil = air.copy(), soil.copy()
        warm_air[first:second] += 8.0
        warm_soil[first:second] += 8.0
        return spliced_records(warm_air, warm_soil, index)

    assert stepped(2000, 2000 + 30 * 48) is not None
    # a pasted season of five months is named (unnamed at 92 days; round leftovers50)
    assert stepped(2000, 2000 + 150 * 48) is not None
    assert stepped(2000, 2000 + 300 * 48) is None
    assert spliced_records(air, soil, None) is None


def test_another_towers_file_from_a_month_on_is_named_and_a_storm_is_not():
    """Known-truth recovery (round mistakes51): another invented tower's records (its own
    weather, a soil 4 K warmer, a drier field nearby) from 1 July 00:00 on, its overlap of stamps
    dropped, step the 5-cm soil at that record alone, which heat conduction cannot (Campbell
    & Norman 1998, ch. 8 (m)): named by the record's start or, with end stamps cut by
    their date, by its end, through the preflight too. The same step at 14:00 on 1 July (a
    storm) and a one-record glitch at the month's first record are not."""
    index, air, soil = _site()
    _, other_air, other_soil = _site(mean=16.0, seed=1)
    assert file_joint(soil, index) is None
    first = int(np.flatnonzero(index == pd.Timestamp("2021-07-01 00:00"))[0])
    for start in (first, first - 1):       # the record starting or ending at midnight
        joined = np.r_[soil[:start], other_soil[start:]]
        text = file_joint(joined, index)
        assert text is not None and f"{index[start]:%Y-%m-%d %H:%M}" in text
        assert "probe replaced" in text         # the other cause, named (review66)
    storm = np.r_[soil[:first + 28], other_soil[first + 28:]]
    assert file_joint(storm, index) is None
    glitch = soil.copy()
    glitch[first] += 3.0
    assert file_joint(glitch, index) is None
    joined = np.r_[soil[:first], other_soil[first:]]
    screened = pd.DataFrame({"tair": air, "tsoil": joined}, index=index)
    stages = [finding.stage for finding in _column_faults(screened, None, 30)]
    assert FILE_STAGE in stages and STAGE not in stages
