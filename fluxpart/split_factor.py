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

__all__ = ["FORTNIGHT_DAYS", "UNIT_FIT", "jump_factor", "stepped_months", "unit_of_factor"]

#: Days either side of a candidate change whose magnitudes are compared.
FORTNIGHT_DAYS = 14
#: Largest ratio between a measured factor and a unit's own factor for the unit to be
#: named as the one the values fit: half the log distance between 22.7 and 46.3
#: (sqrt(46.3 / 22.7) = 1.43) keeps the two units apart.
UNIT_FIT = 1.4


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
