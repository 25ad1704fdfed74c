"""Months of a budget year that hold no measured NEE: the year's sums there are modelled.

A budget year whose NEE was measured in a few months only (a tower installed in
September, an analyser away for a season) or not at all (a year of drivers beside a year
of fluxes) is filled, partitioned and summed like any other: every record present and
filled, so the annual table's ``complete`` is true, and its 95 % intervals are stated.
But gap filling takes a month without a measured record from the records of other
months or years, and both partitionings fit their parameters on measured NEE: such a
month's NEE, GPP and Reco are model output, and the stated intervals' coverage was
measured on site-years whose outages last up to three weeks (DEVELOPERS.md, calibration
and outage benchmarks), not on months without a measurement. This module finds those
months for the budget-year warning (:mod:`fluxpart.budget_warnings`) and the report's
summary card (:mod:`fluxpart.report`), which reads them from a written time series, so it
imports no method module.

Pure functions.

References
----------
Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
assimilation and ecosystem respiration: review and improved algorithm. Global Change
Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x (gap filling by marginal
distribution sampling draws on measured records of similar conditions, at most a few
weeks away before its last passes; the nighttime partitioning fits on measured night
NEE) (m).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["CHECKED_OUTAGE_DAYS", "month_runs_text", "unchecked_months",
           "unmeasured_months"]

#: The longest outage of measured NEE on which the stated 95 % intervals' coverage was
#: measured [days]: the calibration archetype with the longest gaps and
#: ``bench_outages.py`` plant outages of 14-21 days (DEVELOPERS.md, benchmark table).
#: A month without a measured record inside a shorter outage (a few hours or days of
#: a month at the start or end of a record) is an outage the intervals were checked
#: on; a whole calendar month without one (28-31 days) always lasts longer.
CHECKED_OUTAGE_DAYS = 21.0


def unmeasured_months(stamps, measured) -> list[pd.Period]:
    """The calendar months of `stamps` in which no record is measured.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The records of one budget year (interval starts, local standard time).
    measured : array_like of bool
        Per record: NEE measured (not gap-filled, not left unfilled) [1].

    Returns
    -------
    list of pandas.Period
        Monthly periods holding at least one record of `stamps` and no measured one,
        in time order; empty where every month holds a measured record.

    References
    ----------
    Common practice: a month is the unit of the monthly budget table (``share_measured``
    per month), so a month named here is a row of ``monthly.parquet`` whose
    ``share_measured`` is 0.
    """
    stamps = pd.DatetimeIndex(stamps)
    measured = np.asarray(measured, dtype=bool)
    if measured.shape != (len(stamps),):
        raise ValueError(f"measured: expected {len(stamps)} values, one per stamp, "
                         f"found shape {measured.shape}")
    if not len(stamps):
        return []
    keys = np.asarray(stamps.year, dtype=np.int64) * 12 + np.asarray(stamps.month) - 1
    months, position = np.unique(keys, return_inverse=True)
    any_measured = np.zeros(months.size, dtype=bool)
    np.logical_or.at(any_measured, position, measured)
    return [pd.Period(year=int(key // 12), month=int(key % 12) + 1, freq="M")
            for key in months[~any_measured]]


def month_runs_text(months) -> str:
    """Consecutive months written as runs: ``"2021-01 to 2021-08, 2021-11"``.

    Parameters
    ----------
    months : list of pandas.Period
        Monthly periods in time order (as :func:`unmeasured_months` gives them).

    Returns
    -------
    str
        Each run of consecutive months as ``first to last`` (or the month alone),
        joined by commas; ``""`` for no month.

    References
    ----------
    ISO 8601-1:2019, calendar months written ``YYYY-MM`` (m); pandas documentation,
    "Time spans": the difference of two monthly periods is a month offset whose ``n``
    counts the months between them (m).
    """
    runs = []
    for month in months:
        if runs and (month - runs[-1][1]).n == 1:
            runs[-1][1] = month
        else:
            runs.append([month, month])
    return ", ".join(f"{first}" if first == last else f"{first} to {last}"
                     for first, last in runs)


def unchecked_months(stamps, measured, longest_days: float = CHECKED_OUTAGE_DAYS
                     ) -> list[pd.Period]:
    """The months of :func:`unmeasured_months` that lie in an outage longer than `longest_days`.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The records of one budget year (interval starts, local standard time), in time
        order.
    measured : array_like of bool
        Per record: NEE measured (not gap-filled, not left unfilled) [1].
    longest_days : float
        The longest outage on which the intervals' coverage was measured [days]
        (:data:`CHECKED_OUTAGE_DAYS`).

    Returns
    -------
    list of pandas.Period
        Monthly periods holding records of `stamps` and no measured one, where the run
        of unmeasured records around the month (from the record after the last measured
        one before it, or the first record, to the record before the first measured one
        after it, or the last record, plus one record's interval) lasts longer than
        `longest_days`; in time order. Every whole calendar month without a measured
        record is such a month, and every month of a period without any measured
        record; a part of a month at the start or end of the records, unmeasured for
        less, is not (round review31: six hours of a tower's first day,
        31 March, named "a month without measured NEE" whose sums were model output).

    References
    ----------
    Common practice: a month is the unit of the monthly budget table. The outage length
    is the one the project's calibration and outage benchmarks covered (DEVELOPERS.md).
    """
    stamps = pd.DatetimeIndex(stamps)
    measured = np.asarray(measured, dtype=bool)
    months = unmeasured_months(stamps, measured)
    if not months or not measured.any():
        return months                      # a period without any measured NEE: all of it
    ticks = stamps.to_numpy().astype("datetime64[ns]").astype(np.int64)   # any unit
    step = int(np.median(np.diff(ticks))) if ticks.size > 1 else 0
    where = np.flatnonzero(measured)
    keys = np.asarray(stamps.year, dtype=np.int64) * 12 + np.asarray(stamps.month) - 1
    limit = pd.Timedelta(days=float(longest_days)).value
    out = []
    for month in months:
        inside = np.flatnonzero(keys == month.year * 12 + month.month - 1)
        before = where[where < inside[0]]
        after = where[where > inside[-1]]
        first = before[-1] + 1 if before.size else 0
        last = after[0] - 1 if after.size else ticks.size - 1
        if ticks[last] - ticks[first] + step > limit:
            out.append(month)
    return out
