"""Per-period loops by one sort, bit for bit (round speed20, issue 17).

The checks that loop over the months of a record found each month's records by comparing
the whole record with the month (O(records x months)); they now take the positions from
one stable sort (:func:`fluxpart._groups.group_positions`), and the latitude scan of the
clock check takes every month's width in one pass. Each test compares the new code with
the per-period selection it replaces, written here with NumPy's own ``flatnonzero`` and
``sum`` (the outside reference), on invented data: the same values in the same order give
the same bits. The sun's course over a record, asked for four times in a run, is kept and
compared with the course computed afresh.
"""
import math

import numpy as np
import pandas as pd
import pytest

from fluxpart import clock, column_faults, nee_smoothing
from fluxpart._groups import group_positions


def _bits(values):
    return np.asarray(values, dtype=np.float64).view(np.int64)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_group_positions_are_numpys_flatnonzero_of_each_code(seed):
    """Reference: ``numpy.flatnonzero((codes == c) & where)`` for each code of
    ``numpy.unique`` (NumPy documentation), in the same (ascending) order."""
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, 40, size=5000) * 7 - 100         # negative codes too
    where = rng.random(5000) < 0.6
    for mask in (where, None):
        found = group_positions(codes, mask)
        selected = codes if mask is None else codes[mask]
        expected = np.unique(selected)
        assert list(found) == expected.tolist()
        for code in expected:
            chosen = (codes == code) if mask is None else (codes == code) & mask
            np.testing.assert_array_equal(found[code], np.flatnonzero(chosen))
    assert group_positions(codes, np.zeros(codes.size, dtype=bool)) == {}
    months = pd.date_range("2019-12-30", periods=3000, freq="30min").to_period("M")
    by_month = group_positions(months.asi8)
    assert [pd.Period(ordinal=o, freq="M") for o in by_month] == list(months.unique())


def _old_smoothed(nee, night, stamps):
    """The loop before round speed20: each part's changes from its own np.diff."""
    def pair_correlation(x, n, minimum):
        if x.size < 3:
            return None
        change = np.diff(x)
        usable = n[1:] & n[:-1] & np.isfinite(change)
        first, second = change[:-1], change[1:]
        pair = usable[:-1] & usable[1:]
        if int(pair.sum()) < minimum:
            return None
        changes = change[usable]
        if np.mean(changes == 0.0) > nee_smoothing._MAX_ZERO_SHARE:
            return None
        a, b = first[pair], second[pair]
        bound = 5.0 * 1.4826 * float(np.median(np.abs(changes)))
        if not bound > 0.0:
            return None
        a, b = np.clip(a, -bound, bound), np.clip(b, -bound, bound)
        if np.std(a) == 0.0 or np.std(b) == 0.0:
            return None
        a, b = a - a.mean(), b - b.mean()
        return float(np.sum(a * b) / np.sqrt(np.sum(a * a) * np.sum(b * b))), int(pair.sum())

    scores = [pair_correlation(nee, night, nee_smoothing._MIN_PAIRS)]
    months = pd.DatetimeIndex(stamps).to_period("M")
    for first in np.flatnonzero(months[1:] != months[:-1]) + 1:
        for start, end in ((0, first), (first, nee.size)):
            scores.append(pair_correlation(nee[start:end], night[start:end],
                                           nee_smoothing._PART_MIN_PAIRS))
    return scores


@pytest.mark.parametrize("smooth_from", [None, 4000, 9000])
def test_smoothing_parts_from_slices_of_the_whole_equal_their_own_changes(smooth_from):
    """Every part's correlation and pair count, taken from slices of the whole record's
    changes, equals the part's own computation bit for bit (the changes of a slice are
    the slice of the changes); the warning is the same text. Invented nights: a drift
    plus Laplace errors (Hollinger & Richardson 2005 (m)), a running mean of three
    records from `smooth_from` on."""
    rng = np.random.default_rng(11)
    n = 48 * 240
    stamps = pd.date_range("2021-01-01", periods=n, freq="30min")
    hour = stamps.hour.to_numpy()
    night = (hour < 5) | (hour >= 21)
    nee = 3.0 + np.sin(np.arange(n) / 400.0) + rng.laplace(0.0, 0.4, n)
    if smooth_from is not None:
        nee[smooth_from:] = pd.Series(nee).rolling(3, min_periods=1).mean().to_numpy()[
            smooth_from:]
    nee[rng.random(n) < 0.2] = np.nan
    change, usable, pair = nee_smoothing._changes(nee, night)
    counted = np.concatenate(([0], np.cumsum(pair)))
    old = _old_smoothed(nee, night, stamps)
    months = stamps.to_period("M")
    parts = [(0, n, nee_smoothing._MIN_PAIRS)]
    for first in np.flatnonzero(months[1:] != months[:-1]) + 1:
        parts += [(0, first, nee_smoothing._PART_MIN_PAIRS),
                  (first, n, nee_smoothing._PART_MIN_PAIRS)]
    assert len(parts) == len(old)
    for (start, end, minimum), expected in zip(parts, old, strict=True):
        if counted[end - 2] - counted[start] < minimum:
            assert expected is None
            continue
        got = nee_smoothing._part_correlation(change[start:end - 1], usable[start:end - 1],
                                              pair[start:end - 2], minimum)
        assert (got is None) == (expected is None)
        if got is not None:
            assert _bits(got[0]) == _bits(expected[0]) and got[1] == expected[1]
    text = nee_smoothing.smoothed_nee(nee, night, stamps=stamps)
    if smooth_from is None:
        assert text is None
    else:
        assert text is not None and "changes from one night record" in text


def test_clear_responses_and_zero_bins_equal_the_per_period_selection():
    """`_clear_responses` and `_zero_bins` give what the loops over
    ``numpy.unique`` with ``codes == code`` gave (the same values in time order)."""
    rng = np.random.default_rng(5)
    n = 48 * 400
    stamps = pd.date_range("2020-03-01", periods=n, freq="30min")
    codes = stamps.year.to_numpy() * 12 + stamps.month.to_numpy()
    d_rg = rng.normal(0.0, 50.0, n)
    sign = np.where(stamps.month.to_numpy() % 3 == 0, 1.0, -1.0)        # some months flipped
    d_nee = sign * 0.02 * d_rg + rng.normal(0.0, 0.5, n)
    usable = rng.random(n) < 0.3
    rising, falling = [], []
    for code in np.unique(codes[usable]):
        chosen = usable & (codes == code)
        count = int(chosen.sum())
        if count < column_faults._MONTH_PAIRS:
            continue
        r, _ = column_faults._correlation(d_nee[chosen], d_rg[chosen],
                                          column_faults._MONTH_PAIRS)
        if not math.isfinite(r) or abs(r) < column_faults._CLEAR_RESPONSE:
            continue
        if abs(math.atanh(r)) * math.sqrt(count - 3) <= column_faults._LAG_STANDARD_ERRORS:
            continue
        (rising if r > 0 else falling).append((int(code), r))
    got = column_faults._clear_responses(d_nee, d_rg, usable, codes)
    assert got == (rising, falling) and rising and falling

    nee = np.where(rng.random(n) < 0.1, np.nan, rng.laplace(0.0, 0.05, n) * (codes % 5 + 1))
    bins = np.full(n, column_faults._CENSOR_BIN)
    steps = np.diff(nee)
    same = (codes[1:] == codes[:-1]) & np.isfinite(steps)
    for month in np.unique(codes):
        chosen = same & (codes[1:] == month)
        if int(chosen.sum()) < 2:
            continue
        values = steps[chosen]
        sigma = 1.4826 * float(np.median(np.abs(values - np.median(values)))) / math.sqrt(2.0)
        scale = sigma / math.sqrt(2.0)
        bins[codes == month] = min(column_faults._CENSOR_BIN,
                                   column_faults._CENSOR_BIN / 0.2 * scale)
    got_bins = column_faults._zero_bins(nee, stamps)
    np.testing.assert_array_equal(_bits(got_bins), _bits(bins))
    assert np.unique(got_bins).size > 3


def test_sun_heated_months_equal_the_per_month_selection():
    """The months named by `_sun_heated_months` and their excess are those of the loop
    over ``months.unique()`` with ``months == month`` (invented: a thermometer 4 K warm
    in sunlight in two months)."""
    rng = np.random.default_rng(8)
    n = 48 * 200
    stamps = pd.date_range("2021-04-01", periods=n, freq="30min")
    hour = stamps.hour.to_numpy()
    sunlit = (hour >= 10) & (hour < 15) & (rng.random(n) < 0.9)
    dark = (hour < 4) & (rng.random(n) < 0.9)
    difference = rng.normal(0.0, 0.3, n)
    hot = np.isin(stamps.month.to_numpy(), [6, 8]) & sunlit
    difference[hot] += 4.0
    months = stamps.to_period("M")
    expected = []
    for month in months.unique():
        here = np.asarray(months == month)
        day_set, dark_set = sunlit & here, dark & here
        if (int(day_set.sum()) < column_faults._SUNLIT_MONTH_RECORDS
                or int(dark_set.sum()) < column_faults._SUNLIT_MONTH_RECORDS):
            continue
        excess = float(np.median(difference[day_set]) - np.median(difference[dark_set]))
        if excess >= column_faults._SUNLIT_EXCESS:
            expected.append(f"{month} ({excess:+.1f} K)")
    text = column_faults._sun_heated_months(difference, sunlit, dark, stamps, {})
    assert [entry[:7] for entry in expected] == ["2021-06", "2021-08"]
    assert ", ".join(expected) in text


def test_crossing_widths_of_all_rows_are_crossings_bit_for_bit():
    """`clock._crossing_widths` gives `clock._crossings`' width of each row to the last
    bit (its scalar steps are NumPy's element-wise ones) on invented diurnal courses:
    clipped sines with noise, flat and NaN rows, plateaus and two-slot days."""
    rng = np.random.default_rng(3)
    for slots in (2, 5, 24, 48, 96):
        x = np.arange(slots)
        rows = [np.clip(np.sin(2 * np.pi * (x / slots - rng.uniform())), 0, None)
                * rng.uniform(1, 1000) + rng.normal(0, 2, slots) * (k % 2)
                for k in range(200)]
        rows += [np.zeros(slots), np.full(slots, np.nan), np.round(rng.uniform(0, 2, slots)),
                 rng.normal(size=slots)]
        rows[7][1] = np.nan
        curves = np.array(rows)
        widths = clock._crossing_widths(curves, 30.0, clock.EDGE_LEVEL)
        expected = [clock._crossings(row, 30.0, clock.EDGE_LEVEL)[1] for row in curves]
        np.testing.assert_array_equal(_bits(widths), _bits(expected))
        assert np.isfinite(widths).sum() > 150 if slots >= 24 else True


def test_the_sun_course_kept_for_the_same_stamps_is_the_course_computed_afresh():
    """`solar.interval_sun` returns the course it kept only for the same stamps, position
    and interval, and that course is the one computed with nothing kept, bit for bit;
    a caller's stamp array changed afterwards is not mistaken for the kept one, and the
    kept arrays cannot be written. Invented record at an invented site (50° N, 8° E)."""
    from fluxpart import solar

    index = pd.date_range("2021-01-01", periods=48 * 40, freq="30min")
    solar._SUN_CACHE[:] = [None, None]
    fresh = solar.interval_sun(index, 8.0, 1.0, 30)
    solar._SUN_CACHE[:] = [None, None]
    first = solar.potential_radiation(index, 50.0, 8.0, 1.0, 30)
    assert solar.interval_sun(index, 8.0, 1.0, 30.0) is solar._SUN_CACHE[0][2]   # asked twice
    lagged = solar.potential_radiation(index - pd.Timedelta(minutes=5), 50.0, 8.0, 1.0, 30)
    again = solar.interval_sun(index, 8.0, 1.0, 30.0)             # kept past the lagged one
    assert again is solar._SUN_CACHE[0][2]
    for got, expected in zip(again, fresh, strict=True):
        np.testing.assert_array_equal(_bits(got), _bits(expected))
    np.testing.assert_array_equal(_bits(solar.potential_radiation(index, 50.0, 8.0, 1.0, 30)),
                                  _bits(first))
    assert not np.array_equal(lagged, first)
    with pytest.raises(ValueError):
        again[2][0] = 0.0
    other = solar.interval_sun(index, 9.0, 1.0, 30)                # another longitude
    assert not np.array_equal(other[2], fresh[2])
    stamps = index.to_numpy().astype("datetime64[s]")
    kept = solar.interval_sun(stamps, 8.0, 1.0, 30)
    stamps[:] += np.timedelta64(3600, "s")                         # the caller's array moved
    moved = solar.interval_sun(stamps, 8.0, 1.0, 30)
    assert moved is not kept and not np.array_equal(moved[2], kept[2])
    solar.forget_courses()
    assert solar._SUN_CACHE == [None, None]
    np.testing.assert_array_equal(_bits(solar.interval_sun(stamps, 8.0, 1.0, 30)[2]),
                                  _bits(moved[2]))


@pytest.mark.parametrize("k", [0, 48, -48, 96 * 3, -17520 + 5])
def test_tair_moved_by_days_gives_vpd_from_rh_bit_for_bit(k):
    """`tair_days._shifted_vpd` from e_s(T) and 1 - RH/100 computed once equals
    `variables.vpd_from_rh` of the moved air temperature (the Magnus form of Alduchov &
    Eskridge 1996, element by element), NaN where the move leaves no value; invented
    tair and RH with gaps and RH beyond 0-100 %."""
    from fluxpart.tair_days import _shifted_vpd
    from fluxpart.variables import saturation_vapour_pressure, vpd_from_rh

    rng = np.random.default_rng(2)
    n = 17520
    tair = 10.0 + 8.0 * np.sin(np.arange(n) / 300.0) + rng.normal(0, 2, n)
    rh = rng.uniform(-5.0, 105.0, n)
    tair[rng.random(n) < 0.05] = np.nan
    rh[rng.random(n) < 0.05] = np.nan
    moved = np.full(n, np.nan)
    if k >= 0:
        moved[:n - k] = tair[k:]
    else:
        moved[-k:] = tair[:k]
    with np.errstate(invalid="ignore"):
        expected = vpd_from_rh(rh, moved)
    got = _shifted_vpd(saturation_vapour_pressure(tair), 1.0 - np.clip(rh, 0.0, 100.0) / 100.0,
                       k)
    np.testing.assert_array_equal(_bits(got), _bits(expected))
    assert np.isfinite(got).sum() > (1000 if abs(k) < n // 2 else 0)
