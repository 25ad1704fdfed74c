"""Files of one period holding different columns whose loggers' clocks differ by whole
records.

A flux logger's file and a meteorological logger's file of the same period are joined by
stamp. Where the second logger's clock runs a whole record or more apart from the first
(a clock left on UTC beside one on local time, or set by hand half an hour off; or
one logger stamping its records at the interval's start, the other at its end), every
stamp still falls on the shared grid and the join pairs each flux record with the
meteorology of another interval, silently. What the stamps show is the span: both loggers
wrote the same run of records, so their files begin and end the same time apart.
"""

from __future__ import annotations

import numpy as np

__all__ = ["span_shift_minutes"]

#: Largest shift judged [minutes] (our choice: clocks on another zone's time or set an
#: hour or two off; a larger shift is more likely a logger started later)
MAX_SHIFT_MINUTES = 180


def span_shift_minutes(own, others, step_minutes: float) -> float | None:
    """The shift [minutes] of the stamps `own` against `others` where both runs of records
    span the same time and begin and end that shift apart (positive: `own` later), a whole
    number of records of `step_minutes` up to :data:`MAX_SHIFT_MINUTES`; else None.

    Parameters
    ----------
    own, others : array of datetime64
        The stamps of one logger's files and of the other logger's files (any order).
    step_minutes : float
        The record interval both share [minutes].

    Returns
    -------
    float or None
        The shift [minutes], or None where the spans differ (a logger installed or
        stopped at another time), coincide, or lie further apart.

    References
    ----------
    None: a fact of the trade (two loggers writing the same records begin and end
    together); the limit is our choice.
    """
    own = np.asarray(own, dtype="datetime64[s]")
    others = np.asarray(others, dtype="datetime64[s]")
    if own.size < 2 or others.size < 2 or not step_minutes:
        return None
    start = (own.min() - others.min()) / np.timedelta64(1, "m")
    end = (own.max() - others.max()) / np.timedelta64(1, "m")
    if start != end or start == 0 or abs(start) > MAX_SHIFT_MINUTES:
        return None
    return float(start) if start % step_minutes == 0 else None
