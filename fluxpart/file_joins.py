"""Where two consecutive input files meet: a record left empty between files whose
stamps sit one record apart against the sun.

A logger program or export that changed its stamps from the interval's start to its end
(or back) between two files leaves one stamp empty at the join (start marks, then end
marks) and reads every record of one file one record off. A logger that lost one record
at the join leaves the same hole. Measured global radiation tells them apart: against
the sun's course, one file's records sit one record earlier than the other's where the
marks changed, and at the same time where a record was lost.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["boundary_gap_message", "radiation_lag_minutes"]

#: Days of each file next to the join that are judged (our choice: a month, over which
#: the sun's course changes little and a clock rarely drifts a minute)
JOIN_DAYS = 30
#: Fewest judged days on each side (our choice: a single day's clouds can move its
#: centre by an hour, the median of five rarely by a quarter of that)
MIN_DAYS = 5
#: Share of a day's daylight records that must hold Rg for the day to be judged
#: (our choice)
DAY_COVER = 0.75


def radiation_lag_minutes(starts, rg, potential, interval_minutes: float) -> tuple:
    """Median lag of measured Rg's daily centre behind the sun's [min], and the days.

    Each day's centre is the Rg-weighted mean time of day of its records; the sun's is
    the same weighted by potential radiation over the same records, so a missing record
    moves both. The median over days is robust to clouds that fall in the morning or
    afternoon of a few days.

    Parameters
    ----------
    starts : pandas.DatetimeIndex
        Interval starts, local standard time.
    rg : array_like
        Measured global radiation [W m-2]; NaN where missing.
    potential : array_like
        Potential (top-of-atmosphere) radiation of the same records [W m-2].
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    tuple of (float, int)
        The lag [min] (positive = Rg later than the sun; NaN without judged days) and
        the number of days judged.

    References
    ----------
    The centre of a day's radiation falls at solar noon under a clear or evenly cloudy
    sky; the potential radiation after Michalsky (1988), Solar Energy 40(3), 227-235
    (via :mod:`fluxpart.solar`).
    """
    starts = pd.DatetimeIndex(starts)
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    minutes = (starts.hour * 60 + starts.minute).to_numpy(dtype=float) \
        + 0.5 * float(interval_minutes)
    day = starts.normalize()
    lags = []
    for _, rows in pd.Series(np.arange(len(starts))).groupby(day.to_numpy()):
        rows = rows.to_numpy()
        lit = rows[potential[rows] > 0]
        if lit.size < 4:
            continue
        held = lit[np.isfinite(rg[lit])]
        if held.size < DAY_COVER * lit.size:
            continue
        weight = np.clip(rg[held], 0.0, None)
        if weight.sum() <= 0:
            continue
        centre = np.sum(weight * minutes[held]) / weight.sum()
        sun = np.sum(potential[held] * minutes[held]) / potential[held].sum()
        lags.append(centre - sun)
    if not lags:
        return float("nan"), 0
    return float(np.median(lags)), len(lags)


def boundary_gap_message(starts, sources, rg, potential, interval_minutes: float) -> str:
    """The refusal where two consecutive files leave one stamp empty between them and
    their records sit about one record apart against the sun, else ``""``.

    Parameters
    ----------
    starts : pandas.DatetimeIndex
        Interval starts of the records read, in time order, local standard time.
    sources : numpy.ndarray
        The file of each record.
    rg : array_like
        Measured global radiation [W m-2]; NaN where missing.
    potential : array_like
        Potential radiation of the same records [W m-2].
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    str
        One line naming both files, the empty stamp, both lags [min] and both readings.

    References
    ----------
    Loggers stamp a record at the start or end of its averaging interval (common
    practice); a lag of measured radiation behind the sun shows a clock or stamp
    convention off (the clock check of :mod:`fluxpart.clock`).
    """
    if potential is None or len(starts) < 2:
        return ""
    starts = pd.DatetimeIndex(starts)
    sources = np.asarray(sources, dtype=object)
    rg, potential = np.asarray(rg, dtype=float), np.asarray(potential, dtype=float)
    step = pd.Timedelta(minutes=float(interval_minutes))
    reach = pd.Timedelta(days=JOIN_DAYS)
    cuts = np.flatnonzero(sources[1:] != sources[:-1]) + 1
    for cut in cuts:
        if starts[cut] - starts[cut - 1] != 2 * step:
            continue
        # the records within JOIN_DAYS of the join on either side, of each side's file:
        # positions from the sorted stamps, not a mask over the whole record per join
        before = np.arange(starts.searchsorted(starts[cut - 1] - reach), cut)
        before = before[sources[before] == sources[cut - 1]]
        after = np.arange(cut, starts.searchsorted(starts[cut] + reach, side="right"))
        after = after[sources[after] == sources[cut]]
        lag_a, days_a = radiation_lag_minutes(starts[before], rg[before], potential[before],
                                              interval_minutes)
        lag_b, days_b = radiation_lag_minutes(starts[after], rg[after], potential[after],
                                              interval_minutes)
        if min(days_a, days_b) < MIN_DAYS:
            continue
        # the first file read one record early against the second (start marks read as
        # ends before end marks, or end marks read as starts after start marks): within
        # a third of a record (our choice: half-way to the next whole record less a
        # margin for clouds)
        if abs((lag_a - lag_b) + float(interval_minutes)) > float(interval_minutes) / 3:
            continue
        hole = starts[cut - 1] + step
        a, b = sources[cut - 1], sources[cut]
        return (f"input files {a!r} and {b!r} leave the record of {hole:%Y-%m-%d %H:%M} "
                f"(interval start) between them empty, and measured Rg comes {round(lag_a):+d} "
                f"min against the sun in {a!r} ({days_a} days) but {round(lag_b):+d} min in "
                f"{b!r} ({days_b} days), a record ({interval_minutes:g} minutes) apart: "
                "either the stamps of one file mark the other end of the interval (a "
                "logger program or export changed between them), so its records are read "
                "one record off, or the logger lost that record and its clock was set by "
                "a record at the change of file; give the files one convention in a copy "
                "(the one [input] time_marks names), or correct the clock's stamps")
    return ""
