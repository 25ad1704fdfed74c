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

__all__ = ["month_runs_text", "unmeasured_months"]


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
    """
    runs = []
    for month in months:
        if runs and (month - runs[-1][1]).n == 1:
            runs[-1][1] = month
        else:
            runs.append([month, month])
    return ", ".join(f"{first}" if first == last else f"{first} to {last}"
                     for first, last in runs)
