"""NEE written as a running mean of its records (round mistakes28).

Each record's flux is the covariance of its own averaging interval: the turbulence that
carries it has an integral time scale of seconds to a minute, far below the 30 or 60
minutes of a record (Lenschow et al. 1994 (m)), so the random errors of consecutive
records are independent (Hollinger & Richardson 2005; Richardson et al. 2006 (m)). At
night, where the true flux follows the temperature slowly, the change from one record to
the next is then mostly the difference of two independent errors, and two such changes
in a row share one error with opposite signs: their correlation is -1/2. A column
"cleaned" by a running mean over two or more records (a spreadsheet's smoothing, an
export of a moving average) shares its errors over neighbouring records, and that
correlation goes to 0 (exactly 0 for the mean of two or three records of white noise).
The budget moves without a word: on the invented grassland example a three-record mean
of NEE moved the nighttime GPP by -36.6, Reco by -41.5 and the daytime GPP by -28.9
g C m-2 (the smoothing cuts the light response's peaks and the respiration's spread).

References
----------
Hollinger, D. Y., & Richardson, A. D. (2005). Uncertainty in eddy covariance
measurements and its application to physiological models. Tree Physiology
25(7):873-885. doi:10.1093/treephys/25.7.873 (m)

Richardson, A. D., et al. (2006). A multi-site analysis of random error in
tower-based measurements of carbon and energy fluxes. Agricultural and Forest
Meteorology 136(1-2):1-18. doi:10.1016/j.agrformet.2006.01.007 (m)

Lenschow, D. H., Mann, J., & Kristensen, L. (1994). How long is long enough when
measuring fluxes and other turbulence statistics? Journal of Atmospheric and Oceanic
Technology 11(3):661-673 (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .robust_scale import scaled_mad

__all__ = ["SMOOTHED_CORRELATION", "running_mean_length", "smoothed_nee"]

#: Correlation of consecutive night changes of NEE at or above which the column is named
#: [1]. Independent errors give -0.5 (the signal's slow drift raises it a little); a
#: running mean of two or three records gives 0. Errors correlated from one record to
#: the next by rho give -(1 - rho) / 2, so the bound must sit nearer 0 than clean records
#: with such errors: on the other-physics generator (errors correlated between records)
#: the clean records gave a median of -0.38 and at most -0.20, so a bound of -0.2 named
#: 1 of its 42 clean site-years (review of round mistakes28). -0.1 lies 2.8 standard
#: errors (1 / sqrt(100)) above that median at the fewest pairs; on 175 white-noise site-years
#: (``scenarios.generate(0..119)``, the generalisation generator 0..59) a two-record
#: mean gave -0.26 to +0.34 (5th percentile -0.10), a three-record mean -0.34 to +0.35
#: (5th percentile -0.13).
SMOOTHED_CORRELATION = -0.1
#: Pairs of consecutive night changes needed [1]: the standard error of a correlation of
#: n pairs is about 1 / sqrt(n), 0.1 at 100 (our choice; 0 false alarms on 200
#: white-noise generated site-years (round mistakes28) and on the other-physics
#: generator's 42).
_MIN_PAIRS = 100
#: A smoothing from some month on (or until some month) is diluted over the whole record;
#: each part of the record before and after a month's first record is tested too, with
#: more pairs and a bound nearer 0 as about 22 parts are looked at [pairs, 1]: on the
#: 200 generated site-years the clean parts of 200 pairs or more gave -0.27 at most;
#: a two-record mean over the second half-year was named in 66 of them (our choice).
_PART_MIN_PAIRS = 200
_PART_CORRELATION = -0.1
#: Share of the night changes that are exactly 0 above which the test says nothing [1]:
#: a value written twice or held (hourly NEE written into a 30-min file) gives half its
#: changes 0, which other checks name (round mistakes27's written-twice warning). Below
#: it the pairs holding a zero change are dropped (round mistakes29: a mean that skips
#: blanks repeats itself at the edges of the runs between gaps, 23 % of the example's
#: night changes; 0.2 left it unnamed). Our choice, between the two; clean records,
#: rounded to 0.1 or to whole µmol m-2 s-1, and values written twice stayed quiet on
#: 240 generated site-years.
_MAX_ZERO_SHARE = 0.4


def smoothed_nee(nee, is_night, columns=None, stamps=None) -> str | None:
    """A message where the night NEE changes like a running mean's, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record after screening [µmol m-2 s-1], NaN where missing or rejected.
    is_night : array_like of bool
        Night records (the run's night mask).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.
    stamps : pandas.DatetimeIndex, optional
        Interval starts of the records; with them the parts of the record before and
        after each month's first record are tested too (a smoothing from some month on).

    Returns
    -------
    str or None
        The warning text; None where fewer than :data:`_MIN_PAIRS` pairs of consecutive
        night changes exist (pairs holding a change of exactly 0, a value repeated, not
        counted), where more than :data:`_MAX_ZERO_SHARE` of the changes are exactly 0,
        or where their correlation lies below :data:`SMOOTHED_CORRELATION`
        (and, with `stamps`, that of every part of :data:`_PART_MIN_PAIRS` pairs or more
        before or after a month's first record below :data:`_PART_CORRELATION`); with
        `stamps`, also where the night changes of NEE less NEE a day before, over the
        same records, correlate below :data:`_DAY_CORRELATION` over
        :data:`_DAY_MIN_PAIRS` pairs or more (a course repeated every night,
        :class:`_DayDifferences`).

    Notes
    -----
    With d_t = x_t - x_(t-1) and x_t = s_t + e_t, e_t independent with variance σ²,
    cov(d_t, d_(t+1)) = -σ² and var(d_t) = 2σ², so corr(d_t, d_(t+1)) = -1/2 where the
    signal s changes little between records (night). For a mean of k records of e,
    d_t = (e_t - e_(t-k)) / k, and d_t, d_(t+1) share no error for k = 2 or 3: the
    correlation is 0. Changes beyond five scaled median absolute deviations are clipped
    so that a spike the screening kept cannot decide (a spike gives two changes of
    opposite sign, pushing towards -1/2, so clipping makes the test no more eager).

    References
    ----------
    Hollinger, D. Y., & Richardson, A. D. (2005). Tree Physiology 25(7):873-885 (m)

    Richardson, A. D., et al. (2006). Agricultural and Forest Meteorology
    136(1-2):1-18 (m)
    """
    x = np.asarray(nee, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    if x.size < 3 or night.shape != x.shape:
        return None
    column = (columns or {}).get("nee", "nee")
    change, usable, pair = _changes(x, night)
    stamped = stamps is not None and len(stamps) == x.size
    repeated = _DayDifferences(x, night, stamps) if stamped else None
    whole = _part_correlation(change, usable, pair, _MIN_PAIRS)
    if (whole is not None and whole[0] >= SMOOTHED_CORRELATION
            and (repeated is None or repeated.smoothed(0, x.size))):
        return _message(column, whole[0], whole[1], "")
    if not stamped:
        return None
    months = pd.DatetimeIndex(stamps).to_period("M")
    firsts = np.flatnonzero(months[1:] != months[:-1]) + 1
    # the changes and their pairs of the whole record, sliced for each part (the part's
    # own np.diff is the same slice of the whole's), and the pairs counted by a running
    # sum, so a part of too few pairs costs nothing (a record of n months has 2n parts)
    counted = np.concatenate(([0], np.cumsum(pair)))
    parts = _RecordChanges(change, usable, pair)
    for first in firsts:
        for (start, end), where in (((0, first), f"until {months[first - 1]}"),
                                    ((first, x.size), f"from {months[first]}")):
            if end - start < 3 or counted[end - 2] - counted[start] < _PART_MIN_PAIRS:
                continue
            found = parts.correlation(start, end, _PART_MIN_PAIRS)
            if (found is not None and found[0] >= _PART_CORRELATION
                    and repeated.smoothed(start, end)):
                return _message(column, found[0], found[1], f" {where}")
    return None


#: Pairs of day-differenced night changes that can clear a column named by its plain
#: changes [1] (round falsealarm59): the standard error of their correlation is about
#: 1 / sqrt(n), 0.14 at 50, against -1/2 for separate errors and 0 for a running mean.
#: Our choice: at 50 pairs a running mean's day differences fall below
#: :data:`_DAY_CORRELATION` by chance about once in 13 (1.4 standard errors); at the
#: plain test's 100 pairs and more, under once in 40 (review90).
_DAY_MIN_PAIRS = 50
#: Correlation of the day-differenced night changes below which they clear the column
#: [1]: 0.2 from a running mean's 0 (two standard errors at 100 pairs, 1.4 at 50) and 0.3
#: from separate errors' -1/2; our choice. A bound at -0.1 cleared a three-record mean
#: whose plain changes correlated at -0.09 and its day differences, by chance, at -0.18
#: (133 pairs, `test_period_groups.py`); at -0.25 the sixth probe's urban tower stayed
#: named at 2 of 4 seeds (its day differences at -0.21 to -0.24 in a winter part).
_DAY_CORRELATION = -0.2


class _DayDifferences:
    """Night changes of NEE less NEE a day before (round falsealarm59).

    A course that repeats every night (a city's evening traffic, a heating schedule, a
    nightly irrigation pump) moves consecutive records alike and lifts the correlation
    of their changes towards a running mean's. The day difference x(t) - x(t - 1 day)
    takes out whatever repeats from one night to the next, and the season's drift with
    it, while each record's error stays its own (the difference of two independent
    errors), so consecutive changes of it correlate at -1/2 again; a running mean
    commutes with the difference (a linear filter), so a smoothed column's changes still
    correlate at 0.
    """

    def __init__(self, x, night, stamps):
        index = pd.DatetimeIndex(stamps)
        step = (index[1:] - index[:-1]).median() if len(index) > 1 else pd.NaT
        day = pd.Timedelta(days=1)
        self._per_day = int(round(day / step)) if pd.notna(step) and step > pd.Timedelta(0) \
            else 0
        if not (self._per_day and self._per_day * step == day and 3 < self._per_day < x.size):
            self._per_day = 0
            return
        k = self._per_day
        self._y = np.full(x.size, np.nan)
        self._y[k:] = x[k:] - x[:-k]
        self._night = np.zeros(x.size, bool)
        self._night[k:] = night[k:] & night[:-k]

    def smoothed(self, start, end):
        """False where the day-differenced night changes of records ``start .. end - 1``
        correlate below :data:`_DAY_CORRELATION` over :data:`_DAY_MIN_PAIRS` pairs or
        more (independent errors beside a repeated course), True otherwise (no day
        difference or too few pairs to tell: the plain test stands)."""
        if not self._per_day:
            return True
        found = _pair_correlation(self._y[start:end], self._night[start:end], _DAY_MIN_PAIRS)
        return found is None or found[0] >= _DAY_CORRELATION


def _pair_correlation(x, night, minimum):
    """(correlation, pairs) of consecutive night changes of `x`, or None where `x` holds
    fewer than 3 records (see :func:`_part_correlation`)."""
    if x.size < 3:
        return None
    return _part_correlation(*_changes(x, night), minimum)


def _changes(x, night):
    """Consecutive changes of `x`, those between two finite night records (`usable`)
    and the consecutive pairs of usable changes (`pair`)."""
    change = np.diff(x)
    usable = night[1:] & night[:-1] & np.isfinite(change)
    return change, usable, usable[:-1] & usable[1:]


def _part_correlation(change, usable, pair, minimum):
    """(correlation, pairs) of consecutive night changes (from :func:`_changes`), or None
    where fewer than `minimum` pairs, too many zero changes or no spread."""
    first, second = change[:-1], change[1:]
    if int(pair.sum()) < minimum:
        return None
    changes = change[usable]
    if np.mean(changes == 0.0) > _MAX_ZERO_SHARE:
        return None
    # a change of exactly 0 is a value repeated, not measured (round mistakes29): a mean
    # that skips blanks repeats itself at the edges of a run of records, and those pairs
    # say nothing of the errors neighbours share
    pair = pair & (first != 0.0) & (second != 0.0)      # a new array: `pair` may be a view
    if int(pair.sum()) < minimum:
        return None
    return _clipped_correlation(first[pair], second[pair], changes)


def _clipped_correlation(a, b, changes):
    """(correlation, pairs) of the pairs of changes (`a`, `b`), each clipped at five scaled
    median absolute deviations of the night changes `changes`; None where they have no
    spread (see :func:`_part_correlation`)."""
    bound = scaled_mad(changes, centre=0.0, multiple=5.0)
    if not bound > 0.0:
        return None
    a, b = np.clip(a, -bound, bound), np.clip(b, -bound, bound)
    if np.std(a) == 0.0 or np.std(b) == 0.0:
        return None
    # sums of products, not BLAS: the same bits on every CPU and thread count
    a, b = a - a.mean(), b - b.mean()
    return float(np.sum(a * b) / np.sqrt(np.sum(a * a) * np.sum(b * b))), int(a.size)


class _RecordChanges:
    """:func:`_part_correlation` of the parts of one record, each a run of its records.

    The part of records ``start .. end - 1`` has the changes ``change[start:end - 1]``
    and the pairs ``pair[start:end - 2]``; its night changes, its zero changes and its
    pairs without a zero change are each a contiguous run of those of the whole record
    (taken once, in time order), found by running counts. A part then costs its median
    and its clipped sums only, not a pass of selections over its records: the record of
    n months has 2n parts, so those passes grew with the square of its length. Each part
    gets the same values in the same order as its own selections, so the same bits.
    """

    def __init__(self, change, usable, pair):
        first, second = change[:-1], change[1:]
        kept = pair & (first != 0.0) & (second != 0.0)
        self._changes = change[usable]
        self._used = np.concatenate(([0], np.cumsum(usable)))
        self._zeros = np.concatenate(([0], np.cumsum(usable & (change == 0.0))))
        self._pairs = np.concatenate(([0], np.cumsum(pair)))
        self._kept = np.concatenate(([0], np.cumsum(kept)))
        self._first, self._second = first[kept], second[kept]

    def correlation(self, start, end, minimum):
        """:func:`_part_correlation` of the part of records ``start .. end - 1`` (at
        least 3)."""
        if int(self._pairs[end - 2] - self._pairs[start]) < minimum:
            return None
        low, high = self._used[start], self._used[end - 1]
        # np.mean of the part's (changes == 0): its count of zeros over its changes
        if high > low and (int(self._zeros[end - 1] - self._zeros[start]) / int(high - low)
                           > _MAX_ZERO_SHARE):
            return None
        first, last = self._kept[start], self._kept[end - 2]
        if int(last - first) < minimum:
            return None
        return _clipped_correlation(self._first[first:last], self._second[first:last],
                                    self._changes[low:high])


#: The longest running mean whose length :func:`running_mean_length` looks for [records]:
#: eight records are four hours of a half-hourly record, beyond any smoothing that keeps
#: a diurnal course (our choice; the round's examples are means of two, three and five).
_LONGEST_MEAN = 8
#: Correlation of night changes `k` records apart at or below which `k` is read as the
#: running mean's length [1]: halfway between the 0 of shorter lags and the -1/2 of lag
#: `k` (see :func:`running_mean_length`).
_LENGTH_CORRELATION = -0.25


def running_mean_length(nee, night) -> int | None:
    """The number of records a running mean of `nee` spans, read from its night changes.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1 or any unit: only changes are compared].
    night : array_like of bool
        Records with the sun down.

    Returns
    -------
    int or None
        The smallest lag `k` from 2 to 8 records at which night changes `k` records apart
        correlate at -0.25 or below (over 100 pairs or more), or None where none does (no
        running mean, one of another shape such as an exponential filter, or too few
        pairs).

    Notes
    -----
    A running mean of `k` records of independent errors e changes from one record to the
    next by (e[t+k] - e[t]) / k: two changes fewer than `k` records apart share no error
    (correlation 0), two changes `k` apart share e[t+k] with opposite signs (correlation
    -1/2), as consecutive changes of unsmoothed records do (Hollinger & Richardson 2005
    (m)). The median change of such a mean is the single records' divided by `k`, which
    the unit check uses to judge a smoothed column's noise at the single records' scale.
    Pairs holding a change of exactly 0 (a value repeated) are dropped, as in
    :func:`smoothed_nee`.

    References
    ----------
    Hollinger, D. Y., & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology
    25(7):873-885. doi:10.1093/treephys/25.7.873 (m)
    """
    x = np.asarray(nee, dtype=float)
    night = np.asarray(night, dtype=bool)
    if x.size < _LONGEST_MEAN + 3 or night.shape != x.shape:
        return None
    change = np.diff(x)
    usable = night[1:] & night[:-1] & np.isfinite(change) & (change != 0.0)
    if not usable.any():
        return None
    bound = scaled_mad(change[usable], centre=0.0, multiple=5.0)
    if not bound > 0.0:
        return None
    clipped = np.clip(np.where(usable, change, 0.0), -bound, bound)
    for lag in range(2, _LONGEST_MEAN + 1):
        pair = usable[:-lag] & usable[lag:]
        if int(pair.sum()) < _MIN_PAIRS:
            return None
        a, b = clipped[:-lag][pair], clipped[lag:][pair]
        a, b = a - a.mean(), b - b.mean()
        scale = np.sqrt(np.sum(a * a) * np.sum(b * b))
        # sums of products, not BLAS: the same bits on every CPU and thread count
        if scale > 0.0 and float(np.sum(a * b) / scale) <= _LENGTH_CORRELATION:
            return lag
    return None


def _message(column, r, pairs, where):
    return (f"NEE (column {column!r}) changes from one night record to the next as a "
            f"running mean's would{where}: consecutive changes correlate at {r:+.2f} over "
            f"{pairs} pairs, where the independent random errors of separate "
            f"records give about -0.50 (a mean of two or three records gives 0); "
            f"a smoothed column narrows the light and temperature responses and moves "
            f"GPP and Reco: map the column of the fluxes as computed, one per record")
