"""Passes over the whole record per year or per part replaced by slices, bit for bit
(round speed21, issue 17).

The joint nighttime E0 selected each calendar year's records by comparing the whole
record with the year (``years == year``, ``np.isin`` of the whole window column): ten
years of records passed ten times. The check for NEE written as a running mean took the
night changes, zero changes and pairs of each of its 2n month parts by selections over
the part (O(records x months)). Both now take contiguous runs of arrays computed once.
Each test compares the new code with the selection it replaces, written here with
NumPy's own ``isin``, ``unique``, ``mean`` and boolean indexing (the outside reference),
on invented data: the same values in the same order give the same bits. One known-truth
recovery (a planted Lloyd–Taylor E0 per year) checks that the sliced fit still finds it.
"""
import numpy as np
import pandas as pd
import pytest

from fluxpart import column_faults, nee_smoothing
from fluxpart.constants import LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN
from fluxpart.partition import nighttime


def _bits(values):
    return np.asarray(values, dtype=np.float64).view(np.int64)


# --------------------------------------------------------------------------- #
# Joint E0 by calendar year
# --------------------------------------------------------------------------- #
def _lloyd_taylor(temperature, rref, e0):
    """Lloyd & Taylor (1994), eq. 11: Rref exp(E0 (1/(Tref - T0) - 1/(T - T0)))."""
    kelvin = temperature + 273.15
    return rref * np.exp(e0 * (1.0 / (LLOYD_TAYLOR_TREF_KELVIN - LLOYD_TAYLOR_T0_KELVIN)
                               - 1.0 / (kelvin - LLOYD_TAYLOR_T0_KELVIN)))


def _nights(seed, years, e0_by_year):
    """Invented half-hourly nights over `years` calendar years: a seasonal and diurnal
    temperature, a seasonal Rref, Lloyd–Taylor respiration with the year's planted E0,
    Laplace errors (Hollinger & Richardson 2005 (m)), 30 % of the records missing."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2019-01-01", periods=48 * 365 * years + 48, freq="30min")
    day = np.arange(len(index)) / 48.0
    temperature = (8.0 - 9.0 * np.cos(2 * np.pi * day / 365.25)
                   + 3.0 * np.sin(2 * np.pi * day) + rng.normal(0.0, 1.5, len(index)))
    rref = 2.0 + 0.8 * np.sin(2 * np.pi * (day - 100.0) / 365.25)
    e0 = np.array([e0_by_year.get(year, 200.0) for year in index.year])
    nee = _lloyd_taylor(temperature, rref, e0) + rng.laplace(0.0, 0.25, len(index))
    nee[rng.random(len(index)) < 0.3] = np.nan
    hour = index.hour.to_numpy()
    night = (hour < 5) | (hour >= 21)
    return index, nee, temperature, night


def _joint_by_whole_record(index, nee, temperature, night, breaks=None):
    """`fit_e0_joint`'s loop before round speed21: each year's records selected by a
    comparison of the whole record (``years == year``, ``numpy.isin``)."""
    usable = nighttime._usable(nee, temperature, night)
    seconds = nighttime._seconds_since(index, nighttime._window_anchor(index))
    window = np.floor(seconds / (15.0 * 86400.0))
    edges = nighttime.pieces.break_times(seconds, breaks)
    if len(edges):
        window = np.searchsorted(edges, seconds, side="right") * (window.max() + 1) + window
    years = index.year.to_numpy()
    grid = np.arange(30.0, 450.0 + 0.5, 1.0)
    rows = []
    for year in np.unique(years):
        chosen = usable & (years == year)
        keys, counts = np.unique(window[chosen], return_counts=True)
        enough = np.isin(window, keys[counts >= 6]) & chosen
        term = nighttime._temperature_term(temperature[enough])
        starts = np.flatnonzero(np.r_[True, np.diff(window[enough]) != 0])
        rows.append((int(year), *nighttime._profile_e0(nee[enough], term, starts, grid, 0.5)))
    return rows


@pytest.mark.parametrize("seed, years, breaks", [(0, 3, None), (1, 4, [48 * 500 + 7]),
                                                 (2, 1, None)])
def test_joint_e0_by_year_slices_equals_the_whole_record_selection(seed, years, breaks):
    """Every year's E0, standard error, windows, points, acceptance and reason equal those
    of the per-year selection over the whole record, bit for bit (with an event cut too)."""
    index, nee, temperature, night = _nights(seed, years, {2020: 150.0, 2021: 260.0})
    table = nighttime.fit_e0_joint(index, nee, temperature, night, breaks=breaks)
    expected = _joint_by_whole_record(index, nee, temperature, night, breaks)
    assert table.index.tolist() == [row[0] for row in expected]
    for (year, e0, e0_se, windows, points, accepted, reason) in expected:
        row = table.loc[year]
        assert _bits(row["e0"]) == _bits(e0) and _bits(row["e0_se"]) == _bits(e0_se)
        assert (row["windows"], row["points"]) == (windows, points)
        assert bool(row["accepted"]) == accepted and row["reason"] == reason


def test_joint_e0_by_year_slices_recovers_each_planted_year():
    """Known-truth recovery on invented data: planted E0 of 200, 150 and 260 K in three
    calendar years come back within three standard errors, each year from its own nights
    (a year's slice holds none of its neighbours' records)."""
    planted = {2019: 200.0, 2020: 150.0, 2021: 260.0}
    index, nee, temperature, night = _nights(3, 3, planted)
    table = nighttime.fit_e0_joint(index, nee, temperature, night)
    for year, e0 in planted.items():
        row = table.loc[year]
        assert bool(row["accepted"]), row["reason"]
        assert abs(row["e0"] - e0) < 3.0 * row["e0_se"], (year, row["e0"], row["e0_se"])
        own = int((night & np.isfinite(nee) & (index.year == year)).sum())
        assert 0 < row["points"] <= own      # the year's own night records only


# --------------------------------------------------------------------------- #
# NEE written as a running mean: the parts of a record
# --------------------------------------------------------------------------- #
def _record(seed, n, smooth_from=None, rounded=False, repeated=0.0):
    rng = np.random.default_rng(seed)
    stamps = pd.date_range("2020-01-01", periods=n, freq="30min")
    hour = stamps.hour.to_numpy()
    night = (hour < 5) | (hour >= 21)
    nee = 3.0 + np.sin(np.arange(n) / 400.0) + rng.laplace(0.0, 0.4, n)
    if smooth_from is not None:
        nee[smooth_from:] = pd.Series(nee).rolling(2, min_periods=1).mean().to_numpy()[
            smooth_from:]
    if rounded:                     # to 0.1 µmol m-2 s-1: some changes exactly 0
        nee = np.round(nee, 1)
    held = np.flatnonzero(rng.random(n) < repeated)
    nee[held[held > 0]] = nee[held[held > 0] - 1]       # a value written twice
    nee[rng.random(n) < 0.2] = np.nan
    return nee, night, stamps


@pytest.mark.parametrize("seed, smooth_from, rounded, repeated", [
    (0, None, False, 0.0), (1, 9000, False, 0.0), (2, None, True, 0.0),
    (3, None, False, 0.3), (4, 4000, False, 0.1)])
def test_record_parts_equal_each_parts_own_selections(seed, smooth_from, rounded, repeated):
    """`_RecordChanges.correlation` of every month part (until and from each month's first
    record, and some odd cuts) is `_part_correlation` of the part's own slices bit for bit:
    the same None, the same correlation bits and pair count; zero changes (rounded or
    repeated values) and gaps included."""
    n = 48 * 300
    nee, night, stamps = _record(seed, n, smooth_from, rounded, repeated)
    change, usable, pair = nee_smoothing._changes(nee, night)
    parts = nee_smoothing._RecordChanges(change, usable, pair)
    months = stamps.to_period("M")
    cuts = [(0, n), (3, n), (0, 3), (17, 9000), (5000, 5003)]
    for first in np.flatnonzero(months[1:] != months[:-1]) + 1:
        cuts += [(0, first), (first, n)]
    compared = 0
    for start, end in cuts:
        for minimum in (nee_smoothing._PART_MIN_PAIRS, 2):
            expected = nee_smoothing._part_correlation(
                change[start:end - 1], usable[start:end - 1], pair[start:end - 2], minimum)
            got = parts.correlation(start, end, minimum)
            assert (got is None) == (expected is None), (start, end, minimum)
            if got is not None:
                assert _bits(got[0]) == _bits(expected[0]) and got[1] == expected[1]
                compared += 1
    assert compared > 10


def test_part_correlation_gates_on_numpys_mean_of_zero_changes():
    """The zero-change share of a part is ``numpy.mean(changes == 0)`` (NumPy
    documentation: the mean of a boolean array is its share of True): a part above
    `_MAX_ZERO_SHARE` is None, one just below is scored."""
    rng = np.random.default_rng(7)
    n = 48 * 60
    night = np.ones(n, dtype=bool)
    for share, scored in ((0.5, False), (0.25, True)):
        nee = rng.laplace(0.0, 0.5, n)
        for record in np.flatnonzero(rng.random(n) < share):
            if record:
                nee[record] = nee[record - 1]           # a value held: its change is 0
        change, usable, pair = nee_smoothing._changes(nee, night)
        zero_share = float(np.mean(change[usable] == 0.0))
        assert (zero_share > nee_smoothing._MAX_ZERO_SHARE) != scored, zero_share
        parts = nee_smoothing._RecordChanges(change, usable, pair)
        assert (parts.correlation(0, n, 100) is not None) == scored


# --------------------------------------------------------------------------- #
# The column checks' correlation
# --------------------------------------------------------------------------- #
def test_column_correlation_is_numpys_corrcoef_of_the_finite_pairs():
    """`column_faults._correlation` is the Pearson correlation of the pairs both finite
    (reference: ``numpy.corrcoef``, to 1e-12), its count theirs; bit for bit the sums of
    products over ``a[ok]`` and ``b[ok]`` it took before (each selection now taken once)."""
    rng = np.random.default_rng(3)
    a = rng.normal(size=5000)
    b = 0.6 * a + rng.normal(size=5000)
    a[rng.random(5000) < 0.1] = np.nan
    b[rng.random(5000) < 0.1] = np.inf
    ok = np.isfinite(a) & np.isfinite(b)
    r, count = column_faults._correlation(a, b)
    assert count == int(ok.sum())
    assert r == pytest.approx(np.corrcoef(a[ok], b[ok])[0, 1], abs=1e-12)
    x, y = a[ok] - a[ok].mean(), b[ok] - b[ok].mean()
    before = float(np.sum(x * y)) / np.sqrt(float(np.sum(x * x)) * float(np.sum(y * y)))
    assert _bits(r) == _bits(before)
    r, count = column_faults._correlation(a[:20], b[:20])
    assert np.isnan(r) and count == int(ok[:20].sum())
    # integer and single-precision columns: the same bits as the expression before
    for dtype in (np.int64, np.float32):
        u = (rng.normal(size=3000) * 50).astype(dtype)
        v = (0.5 * u + rng.normal(size=3000) * 50).astype(dtype)
        x, y = u - u.mean(), v - v.mean()
        before = float(np.sum(x * y)) / np.sqrt(float(np.sum(x * x)) * float(np.sum(y * y)))
        assert _bits(column_faults._correlation(u, v)[0]) == _bits(before), dtype
    # the centring in place works on copies: the caller's columns keep their values
    kept_a, kept_b = a.copy(), b.copy()
    column_faults._correlation(a, b)
    np.testing.assert_array_equal(a, kept_a)
    np.testing.assert_array_equal(b, kept_b)
