"""A leap year's 29 February absent between two complete days (round mistakes53).

A file whose stamps were written a year early or late (the records of 2021 stamped 2020,
a year's offset subtracted by a script or typed into a logger's clock) is read without a
complaint: every day of the year has its records, the sun's course moves by at most a
few minutes from one year to the next, and the annual budget moved by 0.2 sigma on the
invented grassland example, its only visible effect the year it is labelled with (a
crediting period and a declared event date then point at the wrong year). Where the
year so written is a leap year and the records' own year was not, the calendar betrays
it: 28 February is followed by 1 March, and the leap day is a gap of exactly one day
between two complete days. A logger or script that skips 29 February leaves the same
trace (and every date from 1 March a day off). Either leaves the day empty from the
file clock's midnight to the next: the reader moves the stamps by at most one interval
(their marks), a file stamped in UTC is moved to the site's zone, and a clock on summer
time or of a neighbouring zone lies an hour off. A real outage begins when the power or a
sensor fails, at any hour: one of exactly a day that starts elsewhere (power restored at
the hour it failed) is left alone (round falsealarm55). An outage of exactly the leap
day from midnight with every column measured on the day before and after (a daily file
lost: a card or a download short of one file, review69) cannot be told from a calendar
without the day, and is named with that cause beside the calendar's.

The Gregorian rule (a year divisible by 4, except the centuries not divisible by 400)
decides the leap years (Python's ``calendar.isleap``, the proleptic Gregorian calendar of
ISO 8601).

References
----------
ISO 8601-1:2019. Date and time: representations for information interchange, part 1
(the Gregorian calendar) (m)
"""
from __future__ import annotations

import calendar

import numpy as np
import pandas as pd

__all__ = ["COMPLETE_SHARE", "MEASURED", "MIDNIGHT_TOLERANCE", "STAGE", "missing_leap_day"]

#: The finding's stage, as the warning names it.
STAGE = "input (leap day)"
#: Columns whose values count a record as measured (any one suffices).
MEASURED = ("nee", "rg", "tair", "vpd", "rh", "ustar", "tsoil")
#: Share of the records of the day before and the day after the empty day that must hold
#: a measured value [1]: an outage of a sensor or of the power covers hours around it.
COMPLETE_SHARE = 0.9
#: Farthest the empty day's start may lie from midnight of local standard time or of UTC
#: [min]: one record of a 30- or 60-minute file (its stamps' marks) or an hour of summer
#: time or a neighbouring zone. An outage starting elsewhere is a failure's own hour.
MIDNIGHT_TOLERANCE = 60.0


def _from_midnight(start: pd.Timestamp, utc_offset: float) -> float:
    """Least distance [min] of ``start`` (local standard time) from midnight of local
    standard time or of UTC."""
    minutes = (start - start.normalize()) / pd.Timedelta(minutes=1)
    return min(abs((minutes - base + 720.0) % 1440.0 - 720.0)
               for base in (0.0, 60.0 * utc_offset))


def _empty_run(present: np.ndarray, at: int) -> tuple[int, int]:
    """First and one-past-last position of the run of records without a value at ``at``."""
    filled = np.flatnonzero(present)
    before = filled[filled < at]
    after = filled[filled > at]
    return (before[-1] + 1 if len(before) else 0,
            after[0] if len(after) else len(present))


def missing_leap_day(frame: pd.DataFrame, interval_minutes: float, *,
                     utc_offset: float = 0.0) -> str | None:
    """A message where a leap year's 29 February holds no record between complete days.

    Parameters
    ----------
    frame : pandas.DataFrame
        Records indexed by their interval starts (local standard time), with canonical
        columns among :data:`MEASURED`.
    interval_minutes : float
        Record interval [min].
    utc_offset : float, optional
        The site's offset of local standard time from UTC [h] (a file stamped in UTC
        and moved to it has its midnight there).

    Returns
    -------
    str or None
        The warning text; None where no leap day of the record lies in a run of exactly
        one day without a measured value starting within :data:`MIDNIGHT_TOLERANCE` of
        midnight (local standard time or UTC) whose neighbouring days are complete.

    Notes
    -----
    The records are put on the regular grid of ``interval_minutes``; a record counts as
    measured where any column of :data:`MEASURED` holds a finite value. For each leap
    year whose 29 February lies inside the record, the run of records without a value
    that holds its noon is found; it is named where it spans exactly one day, starts
    within :data:`MIDNIGHT_TOLERANCE` of midnight of local standard time or of UTC (a
    calendar without the day empties it from the file clock's midnight; an outage starts
    at any hour), and the day before it and the day after it each hold measured values
    in :data:`COMPLETE_SHARE` or more of their records.

    References
    ----------
    ISO 8601-1:2019, the Gregorian calendar (m); Python's ``calendar.isleap``.
    """
    columns = [name for name in MEASURED if name in frame.columns]
    if not columns or len(frame) < 3 or interval_minutes <= 0:
        return None
    index = pd.DatetimeIndex(frame.index)
    step = pd.Timedelta(minutes=interval_minutes)
    per_day = int(round(1440.0 / interval_minutes))
    if per_day < 1 or 1440.0 % interval_minutes:
        return None
    grid = pd.date_range(index.min(), index.max(), freq=step)
    if len(grid) > 4 * len(index) + per_day:    # stamps off a regular grid: not judged
        return None
    values = frame[columns].apply(pd.to_numeric, errors="coerce")
    values = values[~index.duplicated()].reindex(grid)
    present = np.isfinite(values.to_numpy(dtype=float)).any(axis=1)
    for year in range(grid[0].year, grid[-1].year + 1):
        if not calendar.isleap(year):
            continue
        noon = pd.Timestamp(year, 2, 29, 12)
        at = grid.searchsorted(noon)
        if at <= per_day or at >= len(grid) - per_day or grid[at] != noon or present[at]:
            continue
        start, end = _empty_run(present, at)
        if end - start != per_day or start < per_day or end + per_day > len(grid):
            continue
        if _from_midnight(grid[start], utc_offset) > MIDNIGHT_TOLERANCE:
            continue
        before = present[start - per_day:start].mean()
        after = present[end:end + per_day].mean()
        if min(before, after) < COMPLETE_SHARE:
            continue
        return (f"no record on 29 February {year} ({grid[start]:%Y-%m-%d %H:%M} to "
                f"{grid[end - 1] + step:%Y-%m-%d %H:%M}, exactly one day empty) while the "
                f"day before and the day after hold measured values in {before:.0%} and "
                f"{after:.0%} of their records: the stamps follow a calendar without that "
                f"day. Likely the records of {year - 1} or {year + 1} (no leap years) "
                f"stamped {year} (a year early or late: the budget and every event date "
                "then name the wrong year), or a logger or script that skips 29 February "
                "(every date from 1 March a day off). Check the year of the file's stamps; a "
                "logger writing a file a day whose file of 29 February was lost leaves "
                "the same gap, and then nothing is wrong")
    return None
