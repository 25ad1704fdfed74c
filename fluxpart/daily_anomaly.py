"""Daily anomaly: a series less its centred 24-h running mean.

Taking out each record's centred running mean over one day leaves the daily course
(and faster changes) and removes the day-to-day level: two thermometers that differ by a
constant, or a humidity that drifts over weeks, compare on their daily swings alone. A
sinusoid of one day's period keeps every value (its mean over any whole period is 0);
a level shared by the whole window is removed. Used by the checks of the air
temperature column against the humidity probe (:func:`fluxpart.column_faults.delayed_tair`,
:func:`fluxpart.damped_tair.damped_ratio`), whose one implementation it is (round
leftovers55: damped_tair imported column_faults' private copy).

References
----------
Chatfield, C. (2004). The Analysis of Time Series: An Introduction, 6th ed. Chapman &
Hall/CRC, section 2.5.2 (moving averages to remove a trend) (m).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["daily_anomaly"]


def daily_anomaly(values, per_day: int) -> np.ndarray:
    """`values` less their centred 24-h running mean.

    Parameters
    ----------
    values : array_like
        Values of evenly spaced records, in any unit (NaN where missing).
    per_day : int
        Records per day (48 for half-hourly records).

    Returns
    -------
    numpy.ndarray
        Each value less the mean of the `per_day` records centred on it (pandas'
        centred window: for an even `per_day`, ``per_day // 2`` records before it and
        ``per_day // 2 - 1`` after), in the unit of `values`; NaN where the value is
        missing or fewer than half a day's records (``per_day // 2``) of its window are.
    """
    values = np.asarray(values, dtype=float)
    mean = (pd.Series(values).rolling(per_day, center=True, min_periods=per_day // 2)
            .mean().to_numpy())
    return values - mean
