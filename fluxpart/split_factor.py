"""The factor by which a column's values jump where its unit changed within the record.

A logger export that changed a flux column's unit part way through (µmol m-2 s-1 until
June, then mg CO2 m-2 s-1 or g C m-2 per record) is found month by month by the unit
checks, which say only that the later months look "too small". Two larger units read
right there, 22.7 and 46.3 times smaller at 30 min (molar masses of C 12.011 and CO2
44.009 g mol-1, :mod:`fluxpart.constants`), and the name of the fix depends on which:
the jump of the values at the change measures it. The two weeks either side of the change
share a season, so the ratio of their largest magnitudes is the factor of the unit,
within the change of weather from one fortnight to the next.

The same jump tells a unit changed for some months from months that are small by nature
(:func:`stepped_months`): a unit is a factor on every value, so where it changes the
values step by that factor from one fortnight to the next, while a dormant season (a
snow-covered tundra's spring, a leafless forest's winter) grows out of and back into
the seasons beside it.

References
----------
The molar masses of C (12.011) and CO2 (44.009 g mol-1) are IUPAC standard atomic
weights (m). Half-hourly CO2 flux records of a fortnight reach the same upper
percentiles within some tens of percent in mid-season, where the canopy changes
slowly (common practice (m)); at green-up and harvest they may change several-fold, so
the factor is stated with the unit it fits, and both candidates are named where it
fits neither.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["FORTNIGHT_DAYS", "SIDE_DAYS", "UNIT_FIT", "change_point", "daily_magnitudes",
           "hour_matched_factor", "jump_factor", "stepped_months", "unit_of_factor"]

#: Days either side of a candidate change whose magnitudes are compared.
FORTNIGHT_DAYS = 14
#: Largest ratio between a measured factor and a unit's own factor for the unit to be
#: named as the one the values fit: half the log distance between 22.7 and 46.3
#: (sqrt(46.3 / 22.7) = 1.43) keeps the two units apart.
UNIT_FIT = 1.4
#: Days either side of a candidate change day over which :func:`change_point` fits the
#: season's course and the step: four weeks, enough days that a few days of weather move
#: the fit little, few enough that the season's course within them is close to a line in
#: log magnitude (our choice).
SIDE_DAYS = 28
#: Percentile of a day's magnitudes taken as its scale: its high values (a flux's
#: midday uptake, the afternoon's VPD), which a unit scales as it scales every value and
#: which do not sit near zero as a day's median may (our choice).
DAY_PERCENTILE = 90
#: Fewest values of a day for its scale to count, and fewest such days each side of a
#: candidate change for the change to be fitted (our choice: a quarter of a half-hourly
#: day; ten days of the four weeks).
DAY_VALUES, SIDE_VALID_DAYS = 12, 10


def jump_factor(values, starts: pd.DatetimeIndex, cut: int, search_days: int = 31
                ) -> tuple[float, pd.Timestamp] | None:
    """The largest jump of a column's magnitude near a candidate split, and where it is.

    Parameters
    ----------
    values : array_like
        The column as written (NaN = missing), one value per record.
    starts : pandas.DatetimeIndex
        Interval start of each record, increasing.
    cut : int
        Index of the first record after the candidate split (a month start or a file
        change); the change itself may lie up to `search_days` before it.
    search_days : int
        Days before the cut (and one after) searched for the change.

    Returns
    -------
    (factor, at) or None
        `factor` = 99th percentile of |values| in the fortnight before `at` divided by
        that of the fortnight after [-] (above 1 where the later values are smaller);
        `at` the day start where the ratio departs most from 1. None where a fortnight
        holds fewer than 48 values.
    """
    values = np.abs(np.asarray(values, dtype=float))
    starts = pd.DatetimeIndex(starts)
    centre = starts[cut].normalize()
    span = pd.Timedelta(days=FORTNIGHT_DAYS)
    best = None
    for day in pd.date_range(centre - pd.Timedelta(days=search_days),
                             centre + pd.Timedelta(days=1), freq="D"):
        lo, mid, hi = starts.searchsorted([day - span, day, day + span])
        before, after = values[lo:mid], values[mid:hi]
        before, after = before[np.isfinite(before)], after[np.isfinite(after)]
        if before.size < 48 or after.size < 48:
            continue
        top_before, top_after = np.percentile(before, 99), np.percentile(after, 99)
        if top_before <= 0.0 or top_after <= 0.0:
            continue
        ratio = float(top_before / top_after)
        if best is None or abs(np.log(ratio)) > abs(np.log(best[0])):
            best = (ratio, day)
    return best


def daily_magnitudes(values, starts: pd.DatetimeIndex) -> tuple[np.ndarray, np.ndarray]:
    """Each day's scale: the log of the :data:`DAY_PERCENTILE` th percentile of |values|.

    Parameters
    ----------
    values : array_like
        The column as written (NaN = missing), one value per record.
    starts : pandas.DatetimeIndex
        Interval start of each record, increasing.

    Returns
    -------
    (days, scale) : numpy.ndarray, numpy.ndarray
        Day numbers (days since 1970-01-01, int) of the days with :data:`DAY_VALUES`
        finite values or more and a positive percentile, and the natural log of that
        percentile [log of the column's unit].
    """
    magnitude = pd.Series(np.abs(np.asarray(values, dtype=float)),
                          index=pd.DatetimeIndex(starts).normalize()).dropna()
    grouped = magnitude.groupby(level=0)
    scale = grouped.quantile(DAY_PERCENTILE / 100.0)
    keep = (grouped.size() >= DAY_VALUES) & (scale > 0.0)
    days = (scale.index[keep] - pd.Timestamp("1970-01-01")).days.to_numpy()
    return days.astype(int), np.log(scale[keep].to_numpy())


def _least_absolute(design: np.ndarray, target: np.ndarray) -> tuple[np.ndarray, float]:
    """Least-absolute-deviation coefficients of `target` on `design` and their summed
    absolute residual (iteratively reweighted least squares, Schlossmacher 1973)."""
    weights = np.ones(target.size)
    for _ in range(20):
        root = np.sqrt(weights)
        coef = np.linalg.lstsq(design * root[:, None], target * root, rcond=None)[0]
        residual = np.abs(target - design @ coef)
        weights = 1.0 / np.maximum(residual, 1e-3)
    return coef, float(residual.sum())


def change_point(values, starts: pd.DatetimeIndex, first: pd.Timestamp, last: pd.Timestamp
                 ) -> tuple[float, pd.Timestamp] | None:
    """The day from which a column's scale changed, and by what factor.

    Every day boundary from `first` to `last` is tried: the days' scales
    (:func:`daily_magnitudes`) within :data:`SIDE_DAYS` either side of it are fitted by
    least absolute deviations as a line (the season's course) plus a step at it, and as
    the line alone. The day whose step lowers the absolute deviation most, per day
    fitted, is the change. A unit is a factor
    on every value, so the days after the change stand apart from those before by the
    same step whatever their weather, while a season moves the scale gradually; a window
    holding only a few changed days at its edge gains little from a step (the 99th
    percentile of a fortnight, :func:`jump_factor`, is set by those few days alone:
    round splitfactor). The factor is then measured hour by hour over the fortnights
    either side of that day (:func:`hour_matched_factor`); where the fitted line grows
    by :data:`UNIT_FIT` or more between the two fortnights' centres (green-up, a
    harvest), that growth is taken out.

    Parameters
    ----------
    values : array_like
        The column as written (NaN = missing), one value per record.
    starts : pandas.DatetimeIndex
        Interval start of each record, increasing.
    first, last : pandas.Timestamp
        The earliest and latest day searched (the day of the first record after the
        change).

    Returns
    -------
    (factor, at) or None
        `factor` = the scale of the values before `at` over that after [-] (above 1 where
        the later values are smaller), the season's course taken out; `at` the first
        day of the later scale (midnight of the records' clock). None where no day in
        the range has :data:`SIDE_VALID_DAYS` days with a scale either side.

    References
    ----------
    Schlossmacher, E. J. (1973). An iterative technique for absolute deviations curve
    fitting. Journal of the American Statistical Association, 68(344), 857-859.
    A step in a series fitted by maximum likelihood over every candidate point (here
    with Laplace errors, the least absolute deviation): Hinkley, D. V. (1970).
    Inference about the change-point in a sequence of random variables. Biometrika,
    57(1), 1-17 (m).
    """
    days, scale = daily_magnitudes(values, starts)
    epoch = pd.Timestamp("1970-01-01")
    best = None
    for day in range((pd.Timestamp(first).normalize() - epoch).days,
                     (pd.Timestamp(last).normalize() - epoch).days + 1):
        inside = np.abs(days - day + 0.5) < SIDE_DAYS
        later = days[inside] >= day
        if later.sum() < SIDE_VALID_DAYS or (~later).sum() < SIDE_VALID_DAYS:
            continue
        line = np.column_stack([np.ones(later.size), (days[inside] - day) / SIDE_DAYS])
        _, without = _least_absolute(line, scale[inside])
        coef, with_step = _least_absolute(np.column_stack([line, later]), scale[inside])
        gain = (without - with_step) / later.size
        if best is None or gain > best[0]:
            best = (gain, epoch + pd.Timedelta(days=day), float(coef[1]))
    if best is None:
        return None
    factor = hour_matched_factor(values, starts, best[1])
    if factor is None:
        return None
    # the season's growth between the two fortnights' centres, from the fitted line,
    # taken out where it reaches the unit tolerance; a smaller one is within the
    # fortnights' own noise, which its estimate would add to
    season = float(np.exp(best[2] * FORTNIGHT_DAYS / SIDE_DAYS))
    if abs(np.log(season)) >= np.log(UNIT_FIT):
        factor *= season
    return factor, best[1]


def hour_matched_factor(values, starts: pd.DatetimeIndex, at: pd.Timestamp) -> float | None:
    """The ratio of a column's scale in the fortnight before `at` to that after, hour by hour.

    For each hour of the day, the :data:`DAY_PERCENTILE` th percentile of |values| of
    that hour in the :data:`FORTNIGHT_DAYS` days before `at` over that in the days from
    `at`; the factor is the median of these ratios (in log). The same hours of the same
    season are compared: a unit scales each of them alike, while the day's course
    (night against day) and the weather of single days weigh little. On the invented
    grassland year's clean columns, tried every third day, the factor departed from 1
    by a median 1.19 and a 95th percentile 1.6 for NEE (1.22 and 1.63 for VPD, 1.08 and
    1.21 for u*, 1.13 and 1.25 for Rg), against 1.22 and 1.99 for NEE's fortnight 99th
    percentile taken whole (round splitfactor): the weather's own change between
    fortnights, which no estimate from them removes.

    Parameters
    ----------
    values : array_like
        The column as written (NaN = missing), one value per record.
    starts : pandas.DatetimeIndex
        Interval start of each record, increasing.
    at : pandas.Timestamp
        The first record time of the later scale.

    Returns
    -------
    float or None
        Scale before over scale after [-]; None where no hour has five values with a
        positive percentile on each side.
    """
    values = np.abs(np.asarray(values, dtype=float))
    starts = pd.DatetimeIndex(starts)
    span = pd.Timedelta(days=FORTNIGHT_DAYS)
    lo, mid, hi = starts.searchsorted([at - span, at, at + span])
    ratios = []
    for rows in (slice(lo, mid), slice(mid, hi)):
        part = pd.Series(values[rows], index=starts.hour[rows]).dropna()
        grouped = part.groupby(level=0)
        scale = grouped.quantile(DAY_PERCENTILE / 100.0)
        ratios.append(scale[(grouped.size() >= 5) & (scale > 0.0)])
    before, after = ratios[0].align(ratios[1], join="inner")
    if before.empty:
        return None
    return float(np.exp(np.median(np.log(before.to_numpy() / after.to_numpy()))))


def unit_of_factor(factor: float, factors: dict) -> str | None:
    """The unit whose factor `factor` fits within :data:`UNIT_FIT`, or None.

    Parameters
    ----------
    factor : float
        A measured ratio of magnitudes, as written in the declared unit over as written
        in the other [-].
    factors : dict
        Unit -> its values' ratio to the declared unit's for one quantity (22.7 for mg
        CO2 m-2 s-1 against µmol m-2 s-1).

    Returns
    -------
    str or None
        The unit nearest in log ratio, where within the fit; None otherwise.
    """
    if not factors or not np.isfinite(factor) or factor <= 0.0:
        return None
    unit = min(factors, key=lambda u: abs(np.log(factor / factors[u])))
    return unit if abs(np.log(factor / factors[unit])) <= np.log(UNIT_FIT) else None


def stepped_months(values, starts: pd.DatetimeIndex, months: list, factor: float) -> list:
    """The months of `months` that a step of the values by a unit's factor sets apart.

    A month whose values alone look like another unit (a flux `factor` times too small)
    was written in that unit only where the values step by about that factor between it
    and the months that are read right: the first step of that size outward from its run
    of such months lies at the run's start or before with the values after it smaller, or
    at the run's end or after with the values after it larger. A run of months without such a step, where the jumps
    could be measured, is small by nature: the ecosystem's dormant season (round
    falsealarm51: a snow-covered tundra's May, 0.83 µmol m-2 s-1 at the 99th percentile,
    joins its June by a factor 0.80 and was named, even refused, as mg CO2 m-2 s-1).

    Parameters
    ----------
    values, starts
        As for :func:`jump_factor` (the column as read).
    months : list of str
        Calendar months ("YYYY-MM") whose values alone look like the other unit.
    factor : float
        The smallest factor of the other units against the declared one [-] (22.7 for
        mg CO2 m-2 s-1 against µmol m-2 s-1); a step counts where it reaches `factor`
        / :data:`UNIT_FIT`.

    Returns
    -------
    list of str
        The months of `months` kept, in their order: those of a run with a step, and
        those of a run beside which no jump could be measured (fewer than 48 values in
        a fortnight: nothing tells them apart).
    """
    if not months:
        return []
    starts = pd.DatetimeIndex(starts)
    record_months = np.asarray(starts.strftime("%Y-%m"))
    cuts = np.flatnonzero(record_months[1:] != record_months[:-1]) + 1
    order = [str(m) for m in record_months[np.r_[0, cuts]]]
    jumps = {}

    def jump_at(position: int):
        # the cut starting the month order[position] (the change may lie within the month
        # before it): the ratio of the fortnights before over after, or None
        if position not in jumps:
            jumps[position] = (jump_factor(values, starts, int(cuts[position - 1]))
                               if 0 < position < len(order) else None)
        return jumps[position]

    least = factor / UNIT_FIT
    flagged = [order.index(m) for m in months if m in order]
    runs = np.split(np.asarray(flagged, dtype=int),
                    np.flatnonzero(np.diff(flagged) != 1) + 1) if flagged else []
    kept = []
    for run in runs:
        first, last = int(run[0]), int(run[-1])
        before = [jump_at(p) for p in range(first, 0, -1)]
        after = [jump_at(p) for p in range(last + 1, len(order))]
        measured = [j for j in before + after if j is not None]
        # outward from the run, the first step of a unit's size: down into the run (a
        # step back up first means the run lies beyond another run of the other unit)
        into = [j[0] for j in before if j is not None and abs(np.log(j[0])) >= np.log(least)]
        out = [j[0] for j in after if j is not None and abs(np.log(j[0])) >= np.log(least)]
        stepped = (into and into[0] > 1.0) or (out and out[0] < 1.0)
        if stepped or not measured:
            kept += [order[p] for p in run]
    return [m for m in months if m in kept]
