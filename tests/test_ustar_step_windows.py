"""Property tests: the u* step check's window quantiles taken as order statistics of each
day's spans, and its figures taken at the candidate days alone, equal to the bit those of
pandas' rolling time windows at every day (fluxpart 0.39.0 as released, round speed62).

The reference below is the 0.39.0 code: pandas' rolling quantile over time windows (a
general-purpose library's own quantile, linear interpolation between order statistics,
Hyndman & Fan 1996, definition 7 (m)) and the check's figures at every day. Hypothesis (a
general-purpose property-testing library) generates the records: invented u*, nights of
any length, missing records, ties (u* written to two decimals), steps up by factors near
3.6 from any day and back, 10- to 60-minute records and records shorter than a span.
"""

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fluxpart import ustar_scale
from fluxpart.ustar_scale import (
    _MIN_STEP_RECORDS,
    KMH_FACTOR,
    STEP_FIT,
    STEP_QUANTILES,
    STEP_SPANS_DAYS,
    TOWER_NIGHT_MEDIAN,
)

_SETTINGS = settings(max_examples=40, deadline=None, derandomize=True,
                     suppress_health_check=[HealthCheck.too_slow])


# ----------------------------------------------------------------- the 0.39.0 code

def _rolling_span_quantiles(times, values, days, span, quantiles):
    empty = [np.full(days.size, np.nan) for _ in quantiles]
    if values.size < 2 * _MIN_STEP_RECORDS:
        return empty, [array.copy() for array in empty]
    first = np.minimum(times.searchsorted(days), values.size - 1)
    before = pd.Series(values, index=times).rolling(f"{span}D", closed="left")
    after = pd.Series(values[::-1], index=pd.DatetimeIndex(
        (times[-1] - times[::-1]).to_numpy() + np.datetime64("2000-01-01"))
    ).rolling(f"{span}D", closed="right")
    enough = ((days - pd.Timedelta(days=span) >= times[0].normalize())
              & (days + pd.Timedelta(days=span) <= times[-1])
              & (before.count().to_numpy()[first] >= _MIN_STEP_RECORDS)
              & (after.count().to_numpy()[::-1][first] >= _MIN_STEP_RECORDS))
    lows = [np.where(enough, before.quantile(q).to_numpy()[first], np.nan) for q in quantiles]
    highs = [np.where(enough, after.quantile(q).to_numpy()[::-1][first], np.nan)
             for q in quantiles]
    return lows, highs


def _every_day_step_up(ustar, is_night, index):
    ustar = np.asarray(ustar, dtype=float)
    is_night = np.asarray(is_night, dtype=bool)
    with np.errstate(invalid="ignore"):
        present = np.isfinite(ustar) & (ustar > 0)
    index = pd.DatetimeIndex(index)
    times, values = index[present & is_night], ustar[present & is_night]
    if values.size < 2 * _MIN_STEP_RECORDS:
        return None
    days = pd.DatetimeIndex(np.unique(times.normalize()))
    ratios, medians = [], None
    for span in STEP_SPANS_DAYS:
        low_sides, high_sides = _rolling_span_quantiles(times, values, days, span,
                                                        STEP_QUANTILES)
        for low_side, high_side in zip(low_sides, high_sides, strict=True):
            with np.errstate(invalid="ignore", divide="ignore"):
                ratios.append(high_side / low_side)
        if medians is None:
            middle = STEP_QUANTILES.index(0.5)
            medians = (low_sides[middle], high_sides[middle])
    day_ratios = []
    for span in STEP_SPANS_DAYS:
        (low_side,), (high_side,) = _rolling_span_quantiles(
            index[present & ~is_night], ustar[present & ~is_night], days, span, (0.5,))
        with np.errstate(invalid="ignore", divide="ignore"):
            day_ratios.append(high_side / low_side)
    ratios = np.array(ratios)
    low, high = KMH_FACTOR / STEP_FIT, KMH_FACTOR * STEP_FIT
    converted = medians[1] / KMH_FACTOR
    day_ratios = np.array(day_ratios)
    judged_days = np.all(np.isfinite(day_ratios), axis=0)
    with np.errstate(invalid="ignore"):
        stepped = (np.all((ratios >= low) & (ratios <= high), axis=0)
                   & (converted >= TOWER_NIGHT_MEDIAN[0]) & (converted <= TOWER_NIGHT_MEDIAN[1])
                   & (~judged_days | np.all((day_ratios >= low) & (day_ratios <= high),
                                            axis=0)))
    if not stepped.any():
        return None
    largest = int(np.flatnonzero(stepped)[np.argmax(np.log(ratios[:, stepped]).sum(axis=0))])
    near = times.searchsorted([days[largest] - pd.Timedelta(days=STEP_SPANS_DAYS[0]),
                               days[largest] + pd.Timedelta(days=STEP_SPANS_DAYS[0])])
    logs = np.log(values[near[0]:near[1]])
    split = near[0] + int(np.argmin(np.cumsum(logs - logs.mean())[:-1])) + 1
    at = times[split].normalize()
    shown = int(days.searchsorted(at))
    if shown >= days.size or days[shown] != at or not stepped[shown]:
        shown = largest
    return {"at": at, "ratios": [float(r) for r in ratios[:, shown]],
            "day_ratios": [float(r) for r in day_ratios[:, shown]],
            "before": float(medians[0][shown]), "after": float(medians[1][shown])}


# ----------------------------------------------------------------- generated records

@st.composite
def _records(draw):
    """An invented record: u*, its night mask and stamps, and a step up from one day."""
    seed = draw(st.integers(0, 2**32 - 1))
    interval = draw(st.sampled_from([10, 15, 30, 60]))
    days = draw(st.sampled_from([5, 20, 40, 100, 200, 400]))
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=days * 1440 // interval,
                          freq=f"{interval}min")
    hours = (index.hour + index.minute / 60.0).to_numpy()
    night_hours = draw(st.floats(2.0, 23.0))             # polar summer to polar winter
    is_night = np.abs(hours - 12.0) >= 12.0 - night_hours / 2.0
    level = draw(st.floats(0.02, 0.6))
    ustar = level * np.exp(rng.normal(0.0, draw(st.floats(0.05, 0.8)), index.size))
    ustar[~is_night] *= draw(st.floats(1.0, 4.0))
    if draw(st.booleans()):                             # ties: written to two decimals
        ustar = np.round(ustar, 2)
    ustar[rng.random(index.size) < draw(st.floats(0.0, 0.6))] = np.nan
    if draw(st.booleans()):                             # a unit changed from one day on
        factor = draw(st.floats(2.0, 5.5))
        start = index[0] + pd.Timedelta(days=draw(st.integers(0, days)))
        later = index >= start
        if draw(st.booleans()):                         # ... and back some weeks later
            later &= index < start + pd.Timedelta(days=draw(st.integers(1, 120)))
        ustar = np.where(later & draw(st.sampled_from([is_night, np.ones_like(is_night)])),
                         ustar * factor, ustar)
    return ustar, is_night, index


def _same_bits(first, second):
    first, second = np.asarray(first, dtype=float), np.asarray(second, dtype=float)
    return first.shape == second.shape and np.array_equal(first.view(np.int64),
                                                          second.view(np.int64))


@_SETTINGS
@given(_records(), st.sampled_from([*STEP_SPANS_DAYS, 1, 3]),
       st.sampled_from([(0.1, 0.5), (0.5,), (0.0, 0.25, 1.0), (0.9,)]))
def test_window_quantiles_equal_pandas_rolling_time_windows(record, span, quantiles):
    ustar, is_night, index = record
    with np.errstate(invalid="ignore"):
        kept = is_night & np.isfinite(ustar) & (ustar > 0)
    times, values = index[kept], ustar[kept]
    days = pd.DatetimeIndex(np.unique(times.normalize()))
    expected = _rolling_span_quantiles(times, values, days, span, quantiles)
    found = ustar_scale._span_quantiles(times, values, days, span, quantiles)
    for expected_side, found_side in zip(expected, found, strict=True):
        assert len(found_side) == len(quantiles)
        for wanted, got in zip(expected_side, found_side, strict=True):
            assert _same_bits(wanted, got)
    # any subset of the days: each day's values are those it has among all the days
    chosen = np.flatnonzero(np.arange(days.size) % 3 == 1)
    subset = ustar_scale._span_quantiles(times, values, days[chosen], span, quantiles)
    for every, some in zip(found, subset, strict=True):
        for whole, part in zip(every, some, strict=True):
            assert _same_bits(whole[chosen], part)


@st.composite
def _stepped_records(draw):
    """An invented record of 100-400 days whose u* steps by 2-5.5 times from a day
    50 days or more from either end (nights alone, or every record), and at times back."""
    seed = draw(st.integers(0, 2**32 - 1))
    interval = draw(st.sampled_from([30, 60]))
    days = draw(st.integers(100, 400))
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=days * 1440 // interval,
                          freq=f"{interval}min")
    is_night = (index.hour < 6) | (index.hour >= 20)
    ustar = draw(st.floats(0.04, 0.3)) * np.exp(rng.normal(0.0, draw(st.floats(0.1, 0.6)),
                                                           index.size))
    ustar[~is_night] *= draw(st.floats(1.0, 3.0))
    if draw(st.booleans()):
        ustar = np.round(ustar, 2)
    ustar[rng.random(index.size) < draw(st.floats(0.0, 0.4))] = np.nan
    start = index[0] + pd.Timedelta(days=draw(st.integers(50, days - 50)))
    later = index >= start
    if draw(st.booleans()):
        later &= index < start + pd.Timedelta(days=draw(st.integers(20, 200)))
    if draw(st.booleans()):
        later &= is_night
    return np.where(later, ustar * draw(st.floats(2.0, 5.5)), ustar), is_night, index


def _same_result(record):
    ustar, is_night, index = record
    expected = _every_day_step_up(ustar, is_night, index)
    found = ustar_scale.ustar_step_up(ustar, is_night, index)
    assert (expected is None) == (found is None)
    if expected is not None:
        assert found["at"] == expected["at"]
        for key in ("ratios", "day_ratios", "before", "after"):
            assert _same_bits(found[key], expected[key])


@_SETTINGS
@given(_records())
def test_step_up_at_the_candidate_days_equals_every_days_figures(record):
    _same_result(record)


@_SETTINGS
@given(_stepped_records())
def test_step_up_of_stepped_records_equals_every_days_figures(record):
    """A quarter of these records step so (10 of the 40 examples): the day named and
    every figure of the warning are those of every day's figures."""
    _same_result(record)


def test_a_program_change_to_km_per_hour_is_found_by_both():
    """A calm site's u* written in km h-1 from 1 July (a step the generated records
    reach only by chance): both give the day and the same figures."""
    rng = np.random.default_rng(4)
    index = pd.date_range("2021-01-01", periods=17520, freq="30min")
    is_night = (index.hour < 6) | (index.hour >= 20)
    ustar = 0.2 * np.exp(rng.normal(0.0, 0.4, index.size))
    ustar = np.where(index >= pd.Timestamp("2021-07-01"), ustar * 3.6, ustar)
    expected = _every_day_step_up(ustar, is_night, index)
    found = ustar_scale.ustar_step_up(ustar, is_night, index)
    assert expected is not None and found["at"] == pd.Timestamp("2021-07-01")
    assert found["at"] == expected["at"]
    for key in ("ratios", "day_ratios", "before", "after"):
        assert _same_bits(found[key], expected[key])
