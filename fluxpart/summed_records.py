"""NEE summed, not averaged, where a record turns to longer intervals (round mistakes51).

A logger reprogrammed from 30- to 60-minute records, or a file resampled to hours in part,
writes a stretch of stamps two intervals apart (named by
``stamp_sequence.interval_change_warning``). NEE is a rate [µmol m-2 s-1]: the hour's value is
the mean of its two half-hours. A spreadsheet's or a script's sum adds the rates and doubles
every value of the stretch, and with it every sum drawn from it (on the invented grassland
example, NEE summed from July moved GPP by +743 g C m-2, 50 sigma), while the stamps alone
tell only that the interval changed. The fluxes either side of the change give it away: the
largest values a fortnight after it twice those of the fortnight before, where a season
changes them by a few tens of percent at most over a month (1.16 at 1 July on the example).

References
----------
Aubinet, M., Vesala, T., & Papale, D. (Eds.) (2012). Eddy Covariance: A Practical Guide to
Measurement and Data Analysis. Springer, ch. 1 (the flux as the covariance's mean over the
averaging period, a rate per unit area and time) (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .split_factor import FORTNIGHT_DAYS, UNIT_FIT, jump_factor

__all__ = ["SUM_FACTOR", "season_trend", "summed_stretch"]

#: Factor of a sum of two records' rates against their mean [1]: 2, by definition.
SUM_FACTOR = 2.0
#: Fewest steps of twice the interval in a row that make a stretch of longer records [1]
#: per day: one day of the longer records, as ``stamp_sequence.interval_change_warning``.
_MIN_DAYS = 1


def _first_long_stretch(starts: pd.DatetimeIndex, interval_minutes: int) -> int | None:
    """Position in `starts` of the first record of the first day-long run of steps of twice
    the interval, or None."""
    steps = np.asarray((starts[1:] - starts[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    double = np.concatenate([[False], steps == 2 * interval_minutes, [False]])
    edges = np.flatnonzero(np.diff(double.astype(np.int8)))
    first, last = edges[0::2], edges[1::2]
    long = (last - first) >= _MIN_DAYS * 24 * 60 // (2 * interval_minutes)
    return int(first[long][0]) + 1 if long.any() else None


def _top(values: np.ndarray, index: pd.DatetimeIndex, start: pd.Timestamp) -> float | None:
    """The 99th percentile of |values| in the fortnight from `start`, or None (fewer than
    48 values, or 0)."""
    lo, hi = index.searchsorted([start, start + pd.Timedelta(days=FORTNIGHT_DAYS)])
    kept = np.abs(values[lo:hi])
    kept = kept[np.isfinite(kept)]
    top = float(np.percentile(kept, 99)) if kept.size >= 48 else 0.0
    return top if top > 0.0 else None


def season_trend(nee, index: pd.DatetimeIndex, at: pd.Timestamp) -> float:
    """The season's growth of |NEE| per fortnight beside `at` [1]: the larger of the 99th
    percentiles' ratio of the fortnight before `at` to the one before it and of the second
    fortnight after `at` to the first (1 where neither pair holds 48 values each).

    A sum of two half-hours doubles every value from the change on at once; a season
    (leaf-out, a crop's growth, a snow melt) grows the flux over weeks, through the change
    as much as beside it: a crop in full growth doubles its largest uptake in a fortnight
    or two (an invented maize's grew 1.77 times across a logger's change to hourly means
    on 14 June, 0.83 in the fortnight before and 2.42 in the fortnight after; round
    falsealarm53). Where the uptake overtakes the night's release, the course of the
    largest values bends upward, so the growth across the change lies between the two
    sides' and is bounded by the faster: the jump at the change is judged against it.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1], NaN where missing.
    index : pandas.DatetimeIndex
        Interval starts of the records.
    at : pandas.Timestamp
        The change.

    Returns
    -------
    float
        The trend factor per fortnight [1].

    References
    ----------
    Aubinet, M., Vesala, T., & Papale, D. (Eds.) (2012). Eddy Covariance. Springer, ch. 1
    (m).
    """
    values = np.asarray(nee, dtype=float)
    index = pd.DatetimeIndex(index)
    span = pd.Timedelta(days=FORTNIGHT_DAYS)
    ratios = []
    for earlier, later in ((at - 2 * span, at - span), (at, at + span)):   # fortnights' starts
        pair = _top(values, index, earlier), _top(values, index, later)
        if None not in pair:
            ratios.append(np.log(pair[1] / pair[0]))
    return float(np.exp(max(ratios))) if ratios else 1.0


def summed_stretch(nee, index: pd.DatetimeIndex, starts: pd.DatetimeIndex,
                   interval_minutes: int, column: str = "nee") -> str | None:
    """A warning where NEE doubles at the record's change to intervals twice as long.

    Parameters
    ----------
    nee : array_like
        NEE of each record of the regular record [µmol m-2 s-1], NaN where missing.
    index : pandas.DatetimeIndex
        Interval starts of the regular record (the file's and the inserted ones).
    starts : pandas.DatetimeIndex
        Interval starts as in the file, sorted and unique.
    interval_minutes : int
        The record interval [minutes].
    column : str
        The file's column of NEE, to name it.

    Returns
    -------
    str or None
        The warning; None where the file has no day of stamps two intervals apart in a row,
        or where the smaller growth of two is not :data:`SUM_FACTOR` within
        ``split_factor.UNIT_FIT`` (1.4): the 99th percentile of NEE's release (NEE > 0)
        and of its uptake (|NEE| of NEE < 0) in the fortnight after the change (searched
        from a day before it to a day after), each against that of the fortnight before. A
        sign with fewer than 48 values in either fortnight (a winter without uptake) is not
        asked; neither sign so, None. A sum doubles both signs, while leaf-out or a harvest
        moves the uptake alone and a season or a rain pulse the release alone. Each sign's
        growth is first divided by the season's growth per fortnight beside the change
        (:func:`season_trend` of that sign's values; round falsealarm53) where that is
        ``UNIT_FIT`` or more: a smaller one is within the tolerance and the percentiles'
        noise (round review68).

    References
    ----------
    Aubinet, M., Vesala, T., & Papale, D. (Eds.) (2012). Eddy Covariance. Springer, ch. 1
    (m).
    """
    first = _first_long_stretch(pd.DatetimeIndex(starts), interval_minutes)
    if first is None:
        return None
    index = pd.DatetimeIndex(index)
    cut = int(index.searchsorted(starts[first]))
    nee = np.asarray(nee, dtype=float)
    grows = {}
    # release and uptake apart: a sum doubles both, while a season can multiply one of them
    # (leaf-out the day's uptake several times in a fortnight, the night's release hardly),
    # so the smaller growth is the sum's evidence. On trial 27's ten site-years, a change to
    # hourly records tried every 4 days (820 in all): hourly means named on 48 with |NEE|
    # taken whole, 3 so; hourly sums named on 611, 601 so (review66); with each sign's
    # season taken out as below, means 1 and sums 527 (every season taken out: 4 and 419)
    for sign, part in (("release", np.where(nee > 0, nee, np.nan)),
                       ("uptake", np.where(nee < 0, nee, np.nan))):
        found = jump_factor(part, index, cut, search_days=1)
        if found is not None:
            # later over earlier, and the season's own growth beside the change (falsealarm53)
            # where it passes the rule's own tolerance: within it the 99th percentiles of
            # one sign move as much by their noise (a winter's release "grew" 1.1-1.3 times
            # a fortnight on trial 27; review68)
            trend = season_trend(part, index, found[1])
            grows[sign] = 1.0 / found[0], trend if trend >= UNIT_FIT else 1.0
    beyond = [ratio / trend for ratio, trend in grows.values()]
    if not beyond or not SUM_FACTOR / UNIT_FIT <= min(beyond) <= SUM_FACTOR * UNIT_FIT:
        return None
    how = ", ".join(
        f"{ratio:.2f} times ({sign}"
        + (f"; {ratio / trend:.2f} beyond the season's {trend:.2f} a fortnight beside it"
           if trend != 1.0 else "") + ")"
        for sign, (ratio, trend) in grows.items())
    return (f"NEE (column {column!r}) grows {how} where the stamps turn "
            f"{2 * interval_minutes} minutes apart ({starts[first]:%Y-%m-%d %H:%M}; the 99th "
            f"percentile of NEE's {' and of its '.join(grows)} in the fortnight after it "
            "against the fortnight before): NEE is a rate, and a longer record's value is the mean of "
            "the records it spans; their sum reads twice the flux, and every sum drawn from "
            "it doubles: average, do not add, the records in a copy of the file")
