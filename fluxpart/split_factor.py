"""The factor by which a column's values jump where its unit changed within the record.

A logger export that changed a flux column's unit part way through (µmol m-2 s-1 until
June, then mg CO2 m-2 s-1 or g C m-2 per record) is found month by month by the unit
checks, which say only that the later months look "too small". Two larger units read
right there, 22.7 and 46.3 times smaller at 30 min (molar masses of C 12.011 and CO2
44.009 g mol-1, :mod:`fluxpart.constants`), and the name of the fix depends on which:
the jump of the values at the change measures it. The two weeks either side of the change
share a season, so the ratio of their largest magnitudes is the factor of the unit,
within the change of weather from one fortnight to the next.

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

__all__ = ["FORTNIGHT_DAYS", "UNIT_FIT", "jump_factor", "unit_of_factor"]

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
