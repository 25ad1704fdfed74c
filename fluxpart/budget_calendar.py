"""Budget years: the year in which each record is budgeted, and the records at its edges.

A budget year runs from ``[processing] year_start`` (``"MM-DD"``; the calendar year by
default) to the same day a year later, and a record belongs to the budget year in which
its interval starts (DESIGN.md §4.1). :func:`budget_years` and
:func:`budget_year_numbers` label the records; :func:`budget_year_edges` leaves out a
fragment of less than a day at the ends of the record and completes a year missing at
most a day at its edges (used by :mod:`fluxpart.canonical_frame`).
"""

from __future__ import annotations

import re
from datetime import datetime

import numpy as np
import pandas as pd

from .config import setting_text
from .errors import ConfigError

__all__ = [
    "budget_year_edges",
    "budget_year_numbers",
    "budget_years",
]

def budget_years(index, year_start: str = "01-01") -> pd.DataFrame:
    """Budget year of each interval start, for budgets that run from `year_start`.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts in local standard time.
    year_start : str
        First day of the budget year as ``"MM-DD"`` (``"01-01"``: calendar years;
        ``"07-01"``: July to June, a southern-hemisphere growing season).

    Returns
    -------
    pandas.DataFrame
        One row per record (same index): ``year`` (int, the calendar year in which
        the record's budget year starts), ``period_start`` and ``period_end`` (the
        first day of that budget year and the first day of the next).

    Raises
    ------
    ConfigError
        `year_start` is not a valid ``"MM-DD"`` day (29 February is refused: it is
        not in every year).

    Notes
    -----
    DESIGN.md §4.1 "Budget year": an interval belongs to the budget year in which
    it starts, as a day belongs to the date on which its intervals start.

    Examples
    --------
    >>> index = pd.DatetimeIndex(["2021-06-30 23:30", "2021-07-01 00:00"])
    >>> budget_years(index, "07-01")["year"].tolist()
    [2020, 2021]
    """
    month, day = _month_day(year_start)
    index = pd.DatetimeIndex(index)
    years = budget_year_numbers(index, year_start)
    starts = pd.to_datetime({"year": years, "month": month, "day": day})
    ends = pd.to_datetime({"year": years + 1, "month": month, "day": day})
    return pd.DataFrame({"year": years, "period_start": starts.to_numpy(),
                         "period_end": ends.to_numpy()}, index=index)


def budget_year_numbers(index, year_start: str = "01-01") -> np.ndarray:
    """The ``year`` column of :func:`budget_years` alone, without the period bounds.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts in local standard time.
    year_start : str
        First day of the budget year as ``"MM-DD"``.

    Returns
    -------
    numpy.ndarray of int64
        For each interval start, the calendar year in which its budget year starts.

    Raises
    ------
    ConfigError
        `year_start` is not a valid ``"MM-DD"`` day.
    """
    month, day = _month_day(year_start)
    index = pd.DatetimeIndex(index)
    before = (index.month < month) | ((index.month == month) & (index.day < day))
    return np.asarray(index.year, dtype=np.int64) - before.astype(np.int64)


def budget_year_edges(index, interval_minutes: int, year_start: str = "01-01",
                      edge_days: float = 1.0) -> tuple[pd.DatetimeIndex, list]:
    """The record's interval starts fitted to its budget years, and what was changed.

    A file cut by the dates of its stamps does not hold whole budget years where its
    stamps mark interval ends (00:00 on 1 January closes the last interval of the year
    before, and the last interval of the year is stamped on the next day) or where the
    logger started or stopped within a day of the year's turn. Such a year's budget
    would be partial for a few records, and the fragment before or after it a budget
    year of its own. Here:

    - a budget year at either end of a record of several budget years that holds fewer
      than one day of records (a fragment) is left out, where another year keeps a
      day or more;
    - a budget year whose only absent records are at its edges, at most `edge_days`
      of them, gets those records as stamps of their own (gaps, filled like any other
      gap), so it is complete.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Regular interval starts in local standard time.
    interval_minutes : int
        Record interval [min].
    year_start : str, optional
        First day of the budget year, ``"MM-DD"`` (:func:`budget_years`).
    edge_days : float, optional
        Largest span of records at a year's edges added as gaps [days]; default one day
        (our choice: a day is the span of the fragment left out, and a day of gaps at
        the year's turn is filled from the days beside it like any other gap).

    Returns
    -------
    index : pandas.DatetimeIndex
        The interval starts to process, named ``"time"`` (`index` itself where
        nothing changes).
    notes : list of str
        One sentence per fragment left out and per year completed at its edges, for the
        run's warnings; empty where nothing changes.
    """
    index = pd.DatetimeIndex(index)
    if len(index) == 0:
        return index, []
    step = pd.Timedelta(minutes=interval_minutes)
    per_day = 1440 // int(interval_minutes)
    table = budget_years(index, year_start)
    years = table["year"].to_numpy()
    label = ("{}" if year_start == "01-01" else "budget year {}")
    counts = pd.Series(years).value_counts()
    notes = []
    keep = np.ones(len(index), dtype=bool)
    whole = counts[counts >= per_day]
    if len(counts) > 1 and not whole.empty:
        first_year, last_year = int(years[0]), int(years[-1])
        causes = {first_year: "a file of stamps that mark interval ends, beginning at 00:00 "
                              f"on the first day of {label.format(first_year + 1)}, holds the "
                              f"last interval of {label.format(first_year)}",
                  last_year: "a file of stamps that mark interval starts, ending at 00:00 on "
                             f"the first day of {label.format(last_year)}, holds its first "
                             "interval"}
        for year in sorted(causes):
            if counts[year] < per_day:
                mine = years == year
                keep &= ~mine
                first, last = index[mine][0], index[mine][-1]
                notes.append(
                    f"{label.format(year)}: only {int(counts[year])} record(s) "
                    f"({first:%Y-%m-%d %H:%M} .. {last:%Y-%m-%d %H:%M}, interval starts), less "
                    "than a day: left out of the run and not budgeted (e.g. "
                    f"{causes[year]})")
    kept, kept_table = index[keep], table[keep]
    start, end = kept[0], kept[-1]
    first_year = kept_table.iloc[0]
    last_year = kept_table.iloc[-1]
    before = int((start - first_year["period_start"]) / step)
    after = int((last_year["period_end"] - step - end) / step)
    if first_year["year"] == last_year["year"]:
        add_before = add_after = before + after <= edge_days * per_day
    else:
        add_before, add_after = before <= edge_days * per_day, after <= edge_days * per_day
    # the added stamps keep the records' place on the clock: starts off the grid of whole
    # intervals (a logger on UTC at a site 5.75 h from it) stay off it
    if add_before and before > 0:
        start = start - before * step
        notes.append(_edge_note(label.format(first_year["year"]), start, before, step,
                                "start"))
    if add_after and after > 0:
        end = end + after * step
        notes.append(_edge_note(label.format(last_year["year"]), end - (after - 1) * step,
                                after, step, "end"))
    if not notes:
        return index, []
    return pd.date_range(start, end, freq=step, name="time"), notes


def _edge_note(year: str, first, count: int, step, edge: str) -> str:
    last = first + (count - 1) * step
    cause = (" (e.g. a file of stamps that mark interval ends, ending on the year's last day, "
             "lacks its last interval)" if edge == "end" else "")
    return (f"{year}: {count} record(s) at its {edge} ({first:%Y-%m-%d %H:%M} .. "
            f"{last:%Y-%m-%d %H:%M}, interval starts) are not in the input: added as gaps and "
            f"filled like any other, so the year is complete{cause}")


def _month_day(year_start) -> tuple[int, int]:
    match = re.fullmatch(r"(\d{2})-(\d{2})", year_start) if isinstance(year_start, str) else None
    if match:
        month, day = int(match[1]), int(match[2])
        try:
            datetime(2021, month, day)  # a year without 29 February
            return month, day
        except ValueError:
            pass
    raise ConfigError(f"[processing] year_start = {setting_text(year_start)} is not allowed: "
                      "expected a day of the year as "
                      "\"MM-DD\", e.g. \"07-01\" (29 February is not in every year)")
