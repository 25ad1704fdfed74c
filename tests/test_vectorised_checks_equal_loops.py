"""Property tests: the night-at-once morning-release check and the all-shifts-at-once
month-shift scores equal, to the bit, the loops they replaced (fluxpart 0.38.0 as
released), on generated records with the edges a tower produces: no record, one record,
a single night, a night at either end, all-NaN u*, thresholds or NEE, one-record months,
10- to 60-minute records and years in any order.

The loops below are the 0.38.0 code, kept here as the reference. Hypothesis (a
general-purpose property-testing library) generates the records.
"""

import math
import struct

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fluxpart import storage_check, units
from fluxpart.column_faults import _shift_pairs, _stretch_scores
from fluxpart.uncertainty import gap_runs

_SETTINGS = settings(max_examples=80, deadline=None, derandomize=True,
                     suppress_health_check=[HealthCheck.too_slow])


# ----------------------------------------------------------------- the 0.38.0 loops

def _loop_nights(ustar, threshold, night, per_morning, calm_share):
    n = night.size
    starts, lengths = gap_runs(night)
    for start, end in zip(starts, starts + lengths, strict=True):
        if end >= n:
            continue
        calm_known = np.isfinite(ustar[start:end]) & np.isfinite(threshold[start:end])
        if not calm_known.any():
            continue
        share = np.mean(ustar[start:end][calm_known] < threshold[start:end][calm_known])
        calm = share >= calm_share if calm_share > 0 else share > 0
        morning = np.arange(end, min(n, end + per_morning))
        yield end, morning[~night[morning]], bool(calm)


def _loop_morning_release(nee_measured, ustar, threshold, is_night, nee_model, year_keys,
                          interval_minutes, calm_share, excluded):
    nee = np.asarray(nee_measured, dtype=float)
    ustar = np.asarray(ustar, dtype=float)
    threshold = np.asarray(threshold, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    residual = nee - np.asarray(nee_model, dtype=float)
    years = np.asarray(year_keys)
    counted = (np.ones(nee.size, dtype=bool) if excluded is None
               else ~np.asarray(excluded, dtype=bool))
    per_morning = max(1, int(round(storage_check.MORNING_HOURS * 60 / int(interval_minutes))))
    rows = {}
    for end, morning, calm in _loop_nights(ustar, threshold, night, per_morning, calm_share):
        kept = morning[np.isfinite(residual[morning])]
        entry = rows.setdefault(years[end], {"calm": [], "other": [], "calm_records": 0})
        if calm:
            entry["calm_records"] += int(counted[morning].sum())
        if kept.size >= storage_check.MIN_MORNING_RECORDS:
            entry["calm" if calm else "other"].append(float(residual[kept].mean()))
    out = []
    grams = float(units.flux_to_carbon(1.0, int(interval_minutes)))
    for year, entry in rows.items():
        calm, other = np.asarray(entry["calm"]), np.asarray(entry["other"])
        if calm.size < 2 or other.size < 2:
            continue
        excess = float(calm.mean() - other.mean())
        se = float(np.sqrt(calm.var(ddof=1) / calm.size + other.var(ddof=1) / other.size))
        z = excess / se if se > 0 else 0.0
        annual = excess * entry["calm_records"] * grams
        out.append({"year": year, "calm_mornings": int(calm.size),
                    "other_mornings": int(other.size), "excess": excess, "z": z,
                    "annual_excess": annual,
                    "flagged": bool(z >= storage_check.MIN_Z
                                    and annual >= storage_check.MIN_ANNUAL_EXCESS)})
    return out


def _loop_release_mornings(ustar, threshold, is_night, year_keys, years, interval_minutes,
                           calm_share):
    night = np.asarray(is_night, dtype=bool)
    keys = np.asarray(year_keys)
    chosen = set(years)
    per_morning = max(1, int(round(storage_check.MORNING_HOURS * 60 / int(interval_minutes))))
    marked = np.zeros(night.size, dtype=bool)
    for end, morning, calm in _loop_nights(np.asarray(ustar, dtype=float),
                                           np.asarray(threshold, dtype=float),
                                           night, per_morning, calm_share):
        if calm and keys[end] in chosen:
            marked[morning] = True
    return marked


def _loop_stretch_score(d_nee, d_rg, firsts, minimum):
    """0.38.0's `score(k, m)` of `_stretch_scores` (float sums of ones for the counts)."""
    cache = {}

    def suffix_moments(k):
        if k not in cache:
            a, b = _shift_pairs(d_nee, d_rg, k)
            ok = np.flatnonzero(np.isfinite(a) & np.isfinite(b))
            a, b = a[ok], b[ok]
            month = np.searchsorted(firsts, ok, side="right")
            sums = np.stack([np.bincount(month, weights=w, minlength=firsts.size + 1)
                             for w in (np.ones(ok.size), a, b, a * a, b * b, a * b)])
            cache[k] = np.cumsum(sums[:, ::-1], axis=1)[:, ::-1]
        return cache[k]

    def score(k, m):
        if abs(k) >= d_nee.size:
            return math.nan, 0
        n, sa, sb, saa, sbb, sab = suffix_moments(k)[:, m + 1]
        count = int(round(n))
        if count < minimum:
            return math.nan, count
        sxx, syy, sxy = saa - sa * sa / n, sbb - sb * sb / n, sab - sa * sb / n
        scale = math.sqrt(max(sxx, 0.0) * max(syy, 0.0))
        return (-sxy / scale if scale > 0 else math.nan), count

    return score


# ----------------------------------------------------------------- comparison

def _bits(value):
    """A float's IEEE 754 bits (every NaN alike); other values as they are."""
    if isinstance(value, float | np.floating):
        value = float(value)
        return "nan" if math.isnan(value) else struct.pack("<d", value)
    return value


def _same_rows(got, expected):
    assert len(got) == len(expected)
    for row, want in zip(got, expected, strict=True):
        assert row.keys() == want.keys()
        for key in want:
            assert _bits(row[key]) == _bits(want[key]), (key, row[key], want[key])
            assert type(row[key]) is type(want[key]), key


# ----------------------------------------------------------------- strategies

_FLOAT = st.one_of(st.floats(-50.0, 50.0, allow_nan=False), st.just(math.nan),
                   st.sampled_from([0.0, -0.0, 0.1, 0.2, math.inf]))


@st.composite
def _records(draw):
    """A tower's records: night runs of random lengths, u*, thresholds, NEE and a model
    with NaN anywhere (or everywhere), year keys in runs (in order or not)."""
    interval = draw(st.sampled_from([10, 15, 30, 60]))
    n = draw(st.integers(0, 160))
    night = np.array(draw(st.lists(st.booleans(), min_size=n, max_size=n)), dtype=bool)
    if draw(st.booleans()):                   # long runs, as day and night are
        length = draw(st.integers(1, 12))
        phase = draw(st.integers(0, 11))
        night = ((np.arange(n) + phase) // length) % 2 == 0
    columns = []
    for _ in range(4):
        if draw(st.integers(0, 9)) == 0:
            columns.append(np.full(n, math.nan))
        else:
            columns.append(np.array(draw(st.lists(_FLOAT, min_size=n, max_size=n)),
                                    dtype=float))
    ustar, threshold, nee, model = columns
    ustar, threshold = np.abs(ustar) / 100.0, np.abs(threshold) / 100.0
    cut = sorted(draw(st.lists(st.integers(0, n), max_size=3)))
    labels = draw(st.lists(st.integers(2019, 2024), min_size=len(cut) + 1,
                           max_size=len(cut) + 1))
    years = np.repeat(np.array(labels), np.diff([0, *cut, n]))
    excluded = (None if draw(st.booleans())
                else np.array(draw(st.lists(st.booleans(), min_size=n, max_size=n)), dtype=bool))
    share = draw(st.sampled_from([0.0, 0.25, storage_check.CALM_SHARE, 1.0]))
    return interval, night, ustar, threshold, nee, model, years, excluded, share


@given(_records())
@_SETTINGS
def test_morning_release_equals_the_night_by_night_loop(records):
    interval, night, ustar, threshold, nee, model, years, excluded, share = records
    with np.errstate(invalid="ignore", divide="ignore"):
        got = storage_check.morning_release(nee, ustar, threshold, night, model, years,
                                            interval, share, excluded)
        expected = _loop_morning_release(nee, ustar, threshold, night, model, years,
                                         interval, share, excluded)
    _same_rows(got, expected)


@given(_records(), st.lists(st.integers(2019, 2024), max_size=3))
@_SETTINGS
def test_release_mornings_equals_the_night_by_night_loop(records, chosen):
    interval, night, ustar, threshold, _, _, years, _, share = records
    with np.errstate(invalid="ignore"):
        got = storage_check.release_mornings(ustar, threshold, night, years, chosen,
                                             interval, share)
    expected = _loop_release_mornings(ustar, threshold, night, years, chosen, interval, share)
    assert got.dtype == bool and np.array_equal(got, expected)


@st.composite
def _changes(draw):
    """Sunlit changes of NEE and Rg with NaN (nights), month starts with one-record and
    empty-of-pairs months, and shifts beyond the record."""
    n = draw(st.integers(0, 120))
    d_rg = np.array(draw(st.lists(_FLOAT, min_size=n, max_size=n)), dtype=float)
    d_nee = np.array(draw(st.lists(_FLOAT, min_size=n, max_size=n)), dtype=float)
    if draw(st.integers(0, 5)) == 0:
        d_nee[:] = math.nan
    firsts = np.unique(np.array(draw(st.lists(st.integers(1, max(1, n)), max_size=6)),
                                dtype=np.int64))
    minimum = draw(st.integers(1, 6))
    most = draw(st.integers(0, n + 3))
    return d_nee, d_rg, firsts, minimum, range(-most, most + 1)


@given(_changes())
@_SETTINGS
def test_month_scores_equal_the_loop_of_stretch_scores(changes):
    d_nee, d_rg, firsts, minimum, shifts = changes
    with np.errstate(invalid="ignore", over="ignore"):
        score, month_scores = _stretch_scores(d_nee, d_rg, firsts, minimum)
        table = month_scores(shifts)
        reference = _loop_stretch_score(d_nee, d_rg, firsts, minimum)
        assert len(table) == firsts.size
        for m in range(firsts.size):
            assert list(table[m]) == list(shifts)
            for k in shifts:
                expected = reference(k, m)
                for got in (table[m][k], score(k, m)):
                    assert got[1] == expected[1] and type(got[1]) is int
                    assert _bits(got[0]) == _bits(expected[0]), (k, m, got, expected)
