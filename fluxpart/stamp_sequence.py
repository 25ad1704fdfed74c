"""The order and spacing of a file's stamps, once read.

Pure functions used by :mod:`fluxpart.io` on the stamps
:func:`fluxpart.timestamps.parse_stamps` returns: repeated stamps and stamps going back
(:func:`check_order`, naming the cause where it can: a daylight-saving repeat, rows
sorted by another column, a block filling a gap, day and month exchanged), a file
written newest first (:func:`written_newest_first`), a short stretch far from the rest
(:func:`check_isolated_stretch`), the record interval (:func:`infer_interval`) and its
changes, stamps off the whole minutes of the interval, and runs of inserted stamps.
Refusals raise a :class:`~fluxpart.errors.FluxpartError` subclass naming the file and the
line; the rest return warning text.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .config import setting_text
from .errors import (
    DuplicateTimestampError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
)
from .stamp_hints import _where
from .stamp_places import date_only_backwards_hint, date_only_repeats_hint, repeated_stamp_hint
from .time_zones import _has_daylight_saving
from .timestamps import JITTER_SECONDS

__all__ = [
    "INTERVALS_MINUTES",
    "check_isolated_stretch",
    "check_order",
    "written_newest_first",
    "clock_alignment_warning",
    "interval_change_warning",
    "infer_interval",
    "inserted_runs",
]

#: Record intervals fluxpart accepts [minutes].
INTERVALS_MINUTES = (30, 60)

_RANGES_SHOWN = 5


def _day_month_mixed(stamps) -> bool:
    """True where the stamps go back in time but run strictly forward once day and month
    are exchanged in each stamp whose day could be a month (12 or less, not equal to it)
    (layouts31: a spreadsheet reading day-first stamps month-first where it could,
    named "a logger clock reset")."""
    index = pd.DatetimeIndex(stamps)
    exchangeable = np.asarray((index.day <= 12) & (index.day != index.month))
    if not exchangeable.any() or exchangeable.all():
        return False
    parts = pd.DataFrame({"year": index.year,
                          "month": np.where(exchangeable, index.day, index.month),
                          "day": np.where(exchangeable, index.month, index.day),
                          "hour": index.hour, "minute": index.minute, "second": index.second})
    exchanged = pd.to_datetime(parts, errors="coerce")
    return bool(exchanged.notna().all() and (np.diff(exchanged.to_numpy()) > np.timedelta64(0)).all())


def check_order(stamps: pd.DatetimeIndex, text: pd.Series, source: str, lines: np.ndarray,
                time_zone: str | None = None) -> None:
    """Raise for repeated stamps or stamps going backwards within one file.

    Exact duplicate rows must have been dropped before; a repeated stamp here
    carries different values.
    """
    duplicated = stamps.duplicated(keep=False)
    if duplicated.any():
        first = int(np.flatnonzero(duplicated)[0])
        rows = np.flatnonzero(stamps == stamps[first])
        listed = ", ".join(str(int(lines[r])) for r in rows[:5])
        hint = "keep one of them in a copy of the file"
        told = (date_only_repeats_hint(pd.DatetimeIndex(stamps), text)
                or repeated_stamp_hint(pd.DatetimeIndex(stamps)))
        repeated = pd.DatetimeIndex(stamps[duplicated])
        same_day = repeated[repeated.normalize() == stamps[first].normalize()]
        # a daylight-saving repeat: one or two clock hours of one day in an autumn month;
        # a zone of one offset all year ("Etc/GMT-1", "UTC") reads no such repeat either
        # (round mistakes41: named only as a repeated stamp, "keep one of them")
        fixed = time_zone is not None and not _has_daylight_saving(time_zone,
                                                                   stamps[first].year)
        if ((time_zone is None or fixed) and len(same_day.floor("h").unique()) <= 2
                and stamps[first].month in (3, 4, 9, 10, 11)):
            zone = (f" (time_zone = {setting_text(time_zone)} keeps one offset all year, "
                    "without daylight saving)" if fixed else "")
            hint = ("if the file is in civil time with daylight saving, set [input] "
                    f"time_zone = \"Area/City\"{zone}; otherwise " + (told or hint))
        elif told:
            hint = told
        elif (time_zone is None and len(repeated.unique()) >= 2
              and repeated.max() - repeated.min() <= pd.Timedelta(hours=1)):
            # the same pattern outside the months of daylight-saving changes: a clock set
            # back by an hour on another date (a logger switched to UTC or another zone)
            hint = ("the stamps of up to an hour repeat there, as where a clock is set back "
                    "by an hour (a logger switched to UTC or another zone?): correct the "
                    "stamps after it in a copy of the file, or keep one of each repeated "
                    "record if they are copies")
        raise DuplicateTimestampError(
            f"stamp {text.iloc[first]!r} occurs {len(rows)} times with different values in "
            f"{source!r} (lines {listed}); {int(stamps.duplicated().sum())} repeated stamp(s) "
            f"in all; {hint}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    backwards = np.flatnonzero(steps < 0)
    if backwards.size:
        row = int(backwards[0]) + 1
        back_days = -float(steps[row - 1]) / 86400.0
        swapped = (date_only_backwards_hint(pd.DatetimeIndex(stamps), text, backwards)
                   or _runs_in_reverse_order(stamps, backwards)
                   or _block_filling_a_gap(stamps, backwards))
        if swapped:
            hint = swapped
        elif _day_month_mixed(stamps):
            hint = ("read with the day and the month exchanged, the stamps whose day is 12 "
                    "or less fall in order with the others: day and month are written in "
                    "two orders (a spreadsheet that read day-first stamps month-first where "
                    "the day allowed?); write every stamp in one order in a copy of the file")
        elif back_days > 1.0 and (found := _sorted_by_another_column(stamps, backwards)):
            hint = found
        elif back_days > 1.0:
            # records merely out of order are a few records apart; a jump back by days
            # or years is a logger clock reset, which sorting would turn into a false
            # stretch of records far from the rest
            hint = (f"the stamps jump back by {back_days:.0f} days ({backwards.size} backward "
                    "step(s) in all): a logger clock reset or rows of another period; correct "
                    "or remove those rows in a copy of the file (sorting would misplace them)")
        elif _midnight_of_the_day_it_ends(stamps, row):
            hint = ("every record ending at midnight seems dated with the day it ends "
                    "(00:00 after 23:30 of the same date): write midnight as 24:00 of that "
                    "day or as 00:00 of the next day in a copy of the file (sorting would "
                    "place each such record a day early)")
        elif (time_zone is not None and -float(steps[row - 1]) <= 3600.0
              and stamps[row].month in (3, 4, 9, 10, 11)):
            # the autumn hour that civil time repeats is resolved by record order (its
            # first records daylight-saving time); a file sorted by civil stamp interleaves
            # the two hours, which sorting again cannot undo
            hint = ("in civil time of [input] time_zone the autumn hour repeats and is read "
                    "by record order (its first records daylight-saving time, the next "
                    "standard time); the file seems sorted by civil stamp, which interleaves "
                    "the two hours: put that hour's daylight-saving records before its "
                    "standard-time ones, as the logger wrote them, in a copy of the file")
        else:
            hint = "sort a copy of the file by time"
        raise NonMonotonicTimestampError(
            f"stamps go backwards at {_where(source, lines, row)}: {text.iloc[row]!r} comes "
            f"after {text.iloc[row - 1]!r}; {hint}")


def written_newest_first(stamps: pd.DatetimeIndex) -> bool:
    """True where a file's stamps go backwards at 99 % of their steps or more (three
    stamps at least): an export sorted newest first, whose records read in reverse
    order are the logger's (a record or two out of place among them aside).

    References
    ----------
    Data portals and databases sort an export by time in either direction (SQL's ORDER
    BY ... DESC; common practice).
    """
    if len(stamps) < 3:
        return False
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    return bool((steps < 0).sum() >= 0.99 * steps.size)


def _runs_in_reverse_order(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where a file is two runs of records in time order written in reverse
    order, the second ending a day or less before the first begins; else "".

    A logger's ring memory read out from the start of its memory rather than from its
    oldest record gives the newest records first and then the older ones, which end
    where the newer begin; two files joined end to end in the wrong order (without the
    second header) look alike. Sorting puts every record in its place, and no stamp
    repeats, unlike a clock reset (a jump back to the logger's default date, years before
    the record), whose rows sorting would misplace. The message said "sorting would
    misplace them" for both.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The file's stamps in file order (no repeats).
    backwards : numpy.ndarray of int
        Positions of the steps that go back in time.

    Returns
    -------
    str
        The hint naming the two runs and the fix, or "".

    References
    ----------
    A ring (circular) buffer overwrites its oldest entry and is read in order from the
    entry after the last one written (common practice).
    """
    if backwards.size != 1 or len(stamps) < 4:
        return ""
    cut = int(backwards[0]) + 1
    first, second = stamps[:cut], stamps[cut:]
    gap = first[0] - second[-1]
    if gap <= pd.Timedelta(0) or gap > pd.Timedelta(days=1):
        return ""
    return (f"the file holds two runs of records in time order, the second "
            f"({second[0]:%Y-%m-%d %H:%M} .. {second[-1]:%Y-%m-%d %H:%M}) ending "
            f"{gap / pd.Timedelta(minutes=1):g} minutes before the first "
            f"({first[0]:%Y-%m-%d %H:%M} .. {first[-1]:%Y-%m-%d %H:%M}) begins: a logger's "
            "ring memory read out from the start of its memory, or two files joined in the "
            "wrong order; sort a copy of the file by time (no stamp repeats)")


def _block_filling_a_gap(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where the records after the one step back in time are a block that fills
    a gap of the others exactly, one record interval after the record before the gap
    to one before the record after it; else "".

    A day read late from a logger's memory card and appended at the end of the file (or
    pasted after the records of the day it was read) is such a block: sorting puts
    every record in its place, and no stamp repeats. A clock reset writes on from its
    new time into records the file holds (a stamp repeats) or to a time the other
    records leave no gap for; its rows sorting would misplace, as the message said of
    both before layouts43. Parameters as :func:`_runs_in_reverse_order`'s; the hint
    returned names the block, the gap it fills and the fix, or is "".
    """
    if backwards.size != 1 or len(stamps) < 4:
        return ""
    cut = int(backwards[0]) + 1
    after = np.flatnonzero(np.asarray(stamps[cut:] > stamps[cut - 1]))
    end = cut + int(after[0]) if after.size else len(stamps)
    block = stamps[cut:end]
    others = stamps[:cut].append(stamps[end:])
    at = int(others.searchsorted(block[0]))
    if at == 0 or at == len(others) or block[-1] >= others[at] or len(block) < 2:
        return ""
    step = pd.Series(block).diff().median()
    if others[at - 1] + step != block[0] or block[-1] + step != others[at]:
        return ""
    return (f"the {len(block)} records from there ({block[0]:%Y-%m-%d %H:%M} .. "
            f"{block[-1]:%Y-%m-%d %H:%M}) fill the gap between {others[at - 1]:%Y-%m-%d %H:%M} "
            f"and {others[at]:%Y-%m-%d %H:%M} of the others exactly (records read late from "
            "the logger's memory and appended?); sort a copy of the file by time (no stamp "
            "repeats)")


def _sorted_by_another_column(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where the file's runs of records in time order interleave (in time order
    the records pass from one run to another more than twice a run) and no stamp
    repeats; else "". Asked where the stamps jump back by more than a day: a midnight
    dated a day early and a civil time's autumn hour sorted by stamp have their own
    hints.

    A table sorted by another column (a quality flag, a value) in a spreadsheet or a
    database query is such a file: with a stable sort, each of the column's values
    keeps its records in time order, and the runs interleave. A clock reset writes its
    later records over a period the file holds (a stamp repeats, refused before this
    test) or into another period (the records pass between runs twice); the message
    named a clock reset and "sorting would misplace them" for a file sorted by its flag
    before layouts45. Parameters as :func:`_runs_in_reverse_order`'s; the hint returned
    names the runs and the fix, or is "".

    References
    ----------
    Spreadsheets and SQL's ORDER BY sort rows by any column, stably or not (common
    practice).
    """
    if len(stamps) < 4 or not stamps.is_unique:
        return ""
    run = np.zeros(len(stamps), dtype=np.int64)
    run[backwards + 1] = 1
    run = np.cumsum(run)
    # in time order, the records pass from one run to another more than twice a run: a
    # clock reset's rows (or a block out of place) pass twice at most
    passes = int((np.diff(run[np.argsort(np.asarray(stamps), kind="stable")]) != 0).sum())
    if passes <= 2 * (int(run[-1]) + 1):
        return ""
    return (f"the file holds {int(run[-1]) + 1} runs of records in time order that interleave "
            f"over the same period ({stamps.min():%Y-%m-%d %H:%M} .. "
            f"{stamps.max():%Y-%m-%d %H:%M}), and no stamp repeats: rows sorted by another "
            "column (a quality flag or a value, in a spreadsheet or a query?); sort a copy "
            "of the file by time")


def _scattered_seconds(stamps: pd.DatetimeIndex, steps: np.ndarray, describe,
                       interval=None) -> str:
    """The message where stamps are 30- or 60-minute records whose seconds scatter beyond
    the rounding of :data:`JITTER_SECONDS` (a logger stamping the moment it writes each
    record, seconds to a minute after the interval ends), else ''.

    The test: most steps lie within a minute of one interval, and stamps off the whole
    minute are common; such records are neither refused as another interval nor read at
    clock times that drift by seconds from record to record.
    """
    if steps.size == 0:
        return ""
    candidates = INTERVALS_MINUTES if interval is None else (interval,)
    for minutes in candidates:
        near = np.abs(steps - minutes) < 1.0
        if near.mean() < 0.5 or not (near & (steps != minutes)).any():
            continue
        seconds = np.asarray(stamps.second + stamps.microsecond / 1e6, dtype=float)
        off = np.minimum(seconds, 60.0 - seconds)
        far = np.flatnonzero(off > JITTER_SECONDS)
        if far.size < 0.1 * len(stamps):
            continue
        first = int(far[0])
        drift = _steady_drift(stamps, minutes)
        if drift:
            return (f"the stamps of these {minutes}-minute records move steadily off the "
                    f"clock grid, {drift} ({far.size} stamps more than {JITTER_SECONDS:g} s "
                    f"from a whole minute, the first at {describe(first)}): a logger clock "
                    "running fast or slow and not set during the record? Write each stamp "
                    "as the whole minute of its interval's end (or start) in a copy of the "
                    "file")
        return (f"the stamps of these {minutes}-minute records carry seconds that vary "
                f"from record to record ({stamps[first]:%Y-%m-%d %H:%M:%S} at "
                f"{describe(first)}; {far.size} stamps more than {JITTER_SECONDS:g} s from "
                f"a whole minute, up to {off.max():.0f} s): only stamps within "
                f"{JITTER_SECONDS:g} s of a whole minute are rounded (clock jitter). A logger "
                "that stamps the moment it writes each record? Write each stamp as the "
                "whole minute of its interval's end (or start) in a copy of the file")
    return ""


def _steady_drift(stamps: pd.DatetimeIndex, minutes: int) -> str:
    """Where the stamps' distance from the `minutes` grid grows (or shrinks) steadily, a
    clock drifting by seconds a day (layouts31: named a logger stamping the moment it
    writes), the drift as text ("+3.0 s a day, from +0 s to +120 s"), else ''.

    Steady: 99 % of the steps of the distance move one way or stay within the jitter
    rounding (:data:`JITTER_SECONDS`), and the distance moves 60 s or more in all. A
    quartz clock drifts so by a few seconds a day (common practice).
    """
    index = pd.DatetimeIndex(stamps)
    since = np.asarray((index - index[0].floor("D")) / pd.Timedelta(seconds=1), dtype=float)
    period = minutes * 60.0
    offset = (since + period / 2) % period - period / 2
    offset = np.unwrap(offset, period=period)
    steps = np.diff(offset)
    if steps.size < 2 or abs(offset[-1] - offset[0]) < 60.0:
        return ""
    sign = np.sign(offset[-1] - offset[0])
    if np.mean(sign * steps >= -JITTER_SECONDS) < 0.99:
        return ""
    days = (index[-1] - index[0]) / pd.Timedelta(days=1)
    if days <= 0:
        return ""
    rate = (offset[-1] - offset[0]) / days
    return f"by {rate:+.1f} s a day (from {offset[0]:+.0f} s to {offset[-1]:+.0f} s)"


def _midnight_of_the_day_it_ends(stamps: pd.DatetimeIndex, row: int) -> bool:
    """Whether the stamp at `row`, which goes back, is 00:00 of the date of the stamp before
    it, and every backward step of the file is such a midnight (a logger that dates the
    record ending at midnight with the day that ends)."""
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    back = np.flatnonzero(steps < 0) + 1
    at_midnight = (stamps[back] == stamps[back].normalize())
    same_date = stamps[back].normalize() == stamps[back - 1].normalize()
    return bool(row in back and at_midnight.all() and same_date.all())


#: A stretch of stamps this far from the rest of the record [days] ... (our choice: more
#: than a year, so that no budget year could join it to the rest)
ISOLATED_GAP_DAYS = 366.0
#: ... and at most this long [days] is refused as a clock reset (our choice: shorter than
#: a month, so that no budget year of its own could be judged from it; a logger clock
#: reset to its default date runs for the days until someone sets it)
ISOLATED_SPAN_DAYS = 31.0


def check_isolated_stretch(stamps: pd.DatetimeIndex, describe=None) -> None:
    """Raise where a short stretch of records lies more than a year from the rest.

    Files of a glob are read in time order, so the records a logger wrote after its clock
    was reset to a default date (2000-01-01 ...) in a file of their own, or at the start
    of a file before the clock was set, go forward in time like any other: read, they
    would open a record of decades of inserted, empty years.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps of every file.
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Raises
    ------
    TimestampError
        A step of more than :data:`ISOLATED_GAP_DAYS` with at most
        :data:`ISOLATED_SPAN_DAYS` of records on one side of it.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    if len(stamps) < 2:
        return
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(days=1), dtype=float)
    for gap in np.flatnonzero(steps > ISOLATED_GAP_DAYS):
        before = (stamps[gap] - stamps[0]) / pd.Timedelta(days=1)
        after = (stamps[-1] - stamps[gap + 1]) / pd.Timedelta(days=1)
        if min(before, after) > ISOLATED_SPAN_DAYS:
            continue
        first, last = (0, gap) if before <= after else (gap + 1, len(stamps) - 1)
        where = f"from {describe(first)} to {describe(last)}"
        start, end = describe(first).split(" of ", 1), describe(last).split(" of ", 1)
        if len(start) == len(end) == 2 and start[1] == end[1]:
            where = f"lines {start[0].split()[-1]} to {end[0].split()[-1]} of {start[1]}"
        raise TimestampError(
            f"the {last - first + 1} record(s) of {where} "
            f"({stamps[first]:%Y-%m-%d %H:%M} .. {stamps[last]:%Y-%m-%d %H:%M}) lie "
            f"{steps[gap]:.0f} days from the rest of the record: a logger clock reset to "
            "its default date, or a file of another period in [input] path? Remove those "
            "rows (or that file) in a copy, or read the periods as separate sites")


#: Said where records are shorter than 30 minutes (layouts43: a 10-minute file was told
#: only to average "the file", fluxes included): the mean of a flux's shorter-period
#: covariances lacks the covariance of eddies longer than those periods, so the flux
#: of 30 minutes is best computed again from the high-frequency data. References:
#: Finnigan, J. J. et al. (2003), A re-evaluation of long-term flux measurement
#: techniques, part I: averaging and coordinate rotation, Boundary-Layer Meteorology
#: 107, 1-48 (m).
_SHORT_FLUX_NOTE = ("; the weather by its means, while the CO2 flux is best computed again "
                    "over 30 minutes from the high-frequency data (a mean of shorter "
                    "periods' fluxes misses the longer eddies' share, Finnigan et al. 2003)")


def infer_interval(stamps: pd.DatetimeIndex, declared=None, describe=None) -> int:
    """Return the record interval [minutes] of sorted, unique `stamps`.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps.
    declared : {30, 60}, optional
        ``[input] interval_minutes``; inferred from the most common spacing if omitted.
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Raises
    ------
    SpacingError
        A single record, a most common spacing other than 30 or 60 minutes, or a
        step that is not a whole multiple of the interval.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    setting = declared is not None
    if declared is None:
        if steps.size == 0:
            raise SpacingError("the file has a single record, so its interval cannot be "
                               "inferred; set [input] interval_minutes = 30 or 60")
        found, counts = np.unique(steps, return_counts=True)
        typical = float(found[np.argmax(counts)])
        if typical not in INTERVALS_MINUTES:
            share = counts.max() / steps.size
            seconds = _scattered_seconds(stamps, steps, describe)
            if seconds:
                raise SpacingError(seconds)
            raise SpacingError(f"the most common spacing between stamps is {typical:g} minutes "
                               f"({100 * share:.0f} % of "
                               f"steps{_spacing_where(steps, typical, describe)}); "
                               "fluxpart needs 30- or 60-minute records: average "
                               f"{_spacing_what(steps, typical)} to 30 or 60 minutes first"
                               f"{_SHORT_FLUX_NOTE if typical < 30 else ''}")
        declared = int(typical)
    irregular = np.flatnonzero(np.abs(steps / declared - np.round(steps / declared)) > 1e-9)
    if irregular.size:
        row = int(irregular[0]) + 1
        seconds = _scattered_seconds(stamps, steps, describe, declared)
        if seconds:
            raise SpacingError(seconds)
        found = sorted({f"{s:g}" for s in steps[irregular][:10]})
        # most steps off a declared interval: the setting, not the file, is at odds
        values, counts = np.unique(steps, return_counts=True)
        typical = float(values[np.argmax(counts)])
        fix = (f"set interval_minutes = {typical:g}, or remove it to have the interval "
               "read from the stamps" if typical in INTERVALS_MINUTES else
               "fluxpart needs 30- or 60-minute records: average the file to 30 or 60 "
               "minutes first")
        mismatch = (f"; [input] interval_minutes = {declared} is set, while most stamps are "
                    f"{typical:g} minutes apart: {fix}"
                    if setting and 2 * irregular.size >= steps.size else "")
        cause = (_midnight_at_last_minute(stamps, declared)
                 or _grid_moved(stamps, row, declared, describe))
        raise SpacingError(
            f"stamps are {steps[irregular[0]]:g} minutes apart at {describe(row)} "
            f"({stamps[row - 1]} -> {stamps[row]}), not a whole multiple of the "
            f"{declared}-minute interval; {irregular.size} such step(s), spacings found: "
            f"{', '.join(found)} minutes{mismatch}{cause}")
    return int(declared)


def _midnight_at_last_minute(stamps: pd.DatetimeIndex, interval: int) -> str:
    """``"; every stamp off the ... grid is 23:59 ..."`` where the only stamps off the
    clock grid of `interval` minutes are 23:59 (two or more), else ``""``.

    A logger (or its export) that keeps every stamp within the day it closes writes the
    record ending at midnight as 23:59 of that day, one minute before the grid's 24:00:
    the steps around it are one minute short and long (29 and 31 minutes), which the
    spacing check names without a cause.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The file's stamps.
    interval : int
        The record interval [minutes].

    Returns
    -------
    str
        The hint (with its leading "; "), or "".

    References
    ----------
    ISO 8601-1:2019 (m): the end of a day is 24:00 of that day, the same instant as 00:00
    of the next; 23:59 is a minute before it.
    """
    minutes = np.asarray(stamps.hour * 60 + stamps.minute, dtype=int)
    off = (minutes % interval != 0) | (np.asarray(stamps.second) != 0)
    if off.sum() < 2 or not np.all(minutes[off] == 23 * 60 + 59):
        return ""
    return (f"; every stamp off the {interval}-minute clock grid is 23:59 ({int(off.sum())} "
            "of them): the records ending at midnight seem stamped with the last minute of "
            "the day they end; write them as 24:00 of that day (or 00:00 of the next) in a "
            "copy of the file")


def _grid_moved(stamps: pd.DatetimeIndex, row: int, interval: int, describe) -> str:
    """``"; the stamps from ... to ... lie N minute(s) later ..."`` where the clock grid
    moves at stamp `row` and stays moved for a day or more, else ``""`` (shift in
    [minutes]).

    A logger clock set by hand or drifting by whole minutes between two
    synchronisations writes its stamps at minute 1 and 31 (or 29 and 59) from one
    record on: a single step of 31 or 29 minutes, then regular records on another
    grid. The refusal named only the odd step; the moved grid and its extent tell the
    cause (our choice of length: a day of records, as for the interval change).
    """
    minutes = np.asarray((stamps - stamps[0]) / pd.Timedelta(minutes=1), dtype=float)
    phase = np.mod(minutes, interval)
    before, after = phase[row - 1], phase[row]
    if np.isclose(before, after):
        return ""
    same = np.isclose(phase[row:], after)
    run = int(np.argmin(same)) if not same.all() else same.size
    if run < 24 * 60 // interval:
        return ""
    moved = (after - before) % interval
    shift = moved if moved <= interval / 2 else moved - interval
    end = (f"to {describe(row + run - 1)}" if row + run < stamps.size else
           "to the last record")
    return (f"; the stamps from {describe(row)} {end} ({run} records) lie "
            f"{abs(shift):g} minute(s) {'later' if shift > 0 else 'earlier'} on the clock "
            "grid than those before (a logger clock set or drifting by whole minutes?): "
            "align them in a copy of the file")


def _spacing_where(steps: np.ndarray, typical: float, describe) -> str:
    """Where the steps of a refused spacing run: ``", from line .. to line .."``.

    Several files read as one record (30-minute files of one half-year and 10-minute
    files of the other, a logger reprogrammed) were refused naming no file; the first
    and last record of the steps of `typical` minutes name them (`describe` gives file
    and line).
    """
    at = np.flatnonzero(steps == typical)
    # the first step's earlier stamp may close a stretch of another spacing (the last
    # record of a 30-minute file): name its later stamp, unless it opens the record
    first = describe(int(at[0]) + (at[0] > 0))
    last = describe(int(at[-1]) + 1)
    return f", from {first} to {last}"


def _spacing_what(steps: np.ndarray, typical: float) -> str:
    """``"the file"``, or ``"those records"`` where other steps are 30 or 60 minutes."""
    others = np.isin(steps, INTERVALS_MINUTES).sum()
    # a record that is 30- or 60-minute in part (another file, another program) keeps
    # that part: only the records of the other spacing need averaging
    return "those records" if others else "the file"


def interval_change_warning(stamps: pd.DatetimeIndex, interval_minutes: int,
                            describe=None) -> str | None:
    """A warning where the stamps step by twice the interval for a day or more, else None.

    A logger whose interval changed (30 to 60 minutes) within the record writes a
    stretch of stamps two intervals apart: each of its records would be read as one
    record of `interval_minutes` (the later half of its true interval) and every other
    interval inserted as missing. A day of such steps in a row does not come from
    records lost one at a time (our choice of length: one day of the longer records).

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps as in the file.
    interval_minutes : int
        The record interval [minutes].
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Returns
    -------
    str or None
        The warning, naming the first such stretch.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    double = np.concatenate([[False], steps == 2 * interval_minutes, [False]])
    edges = np.flatnonzero(np.diff(double.astype(np.int8)))
    first, last = edges[0::2], edges[1::2]          # steps first .. last - 1 are double
    long = (last - first) >= 24 * 60 // (2 * interval_minutes)
    if not long.any():
        return None
    start, end = int(first[long][0]), int(last[long][0])
    return (f"the stamps are {2 * interval_minutes} minutes apart for {end - start} steps in a row "
            f"from {describe(start)} ({stamps[start]} .. {stamps[end]}; {int(long.sum())} such "
            f"stretch(es) of a day or more) in a record of {interval_minutes}-minute intervals: "
            f"if the logger changed its interval, each of those records is read as "
            f"{interval_minutes} minutes and every other interval inserted as missing; average "
            f"the whole record to {2 * interval_minutes} minutes in a copy of the file")


def clock_alignment_warning(starts: pd.DatetimeIndex, interval_minutes: int,
                            time_marks: str) -> str | None:
    """Return a warning when interval starts are off the clock grid, else None."""
    midnight = starts.normalize()
    offset = np.asarray((starts - midnight) / pd.Timedelta(minutes=1), dtype=float)
    off_grid = np.mod(offset, interval_minutes) != 0
    if not off_grid.any():
        return None
    minute = offset[np.flatnonzero(off_grid)[0]] % 60
    text = (f"interval starts fall at minute {minute:g} of the hour, not on the "
            f"{interval_minutes}-minute clock grid ({int(off_grid.sum())} of {len(starts)} "
            "records)")
    # the stamp's place in its interval explains an offset of half an interval or a whole
    # one from the declared place; any other offset is the clock's or the export's
    half_off = np.mod(minute, interval_minutes) == interval_minutes / 2
    if half_off:
        return f"{text}; check [input] time_marks = {setting_text(time_marks)}"
    return (f"{text}: read at their own times (the sun's position and the budget years' "
            "edges follow them); a logger clock off by minutes, or stamps of the last minute "
            "or second of each interval? Align the stamps in a copy of the file")


def inserted_runs(inserted: pd.DatetimeIndex, interval_minutes: int) -> tuple[tuple, int]:
    """Return the first few runs of inserted stamps (first, last, count) and the run count."""
    if len(inserted) == 0:
        return (), 0
    steps = np.asarray((inserted[1:] - inserted[:-1]) / pd.Timedelta(minutes=interval_minutes))
    breaks = np.flatnonzero(steps != 1)
    starts = np.concatenate([[0], breaks + 1])
    ends = np.concatenate([breaks, [len(inserted) - 1]])
    ranges = tuple((inserted[s], inserted[e], int(e - s + 1))
                   for s, e in zip(starts[:_RANGES_SHOWN], ends[:_RANGES_SHOWN], strict=True))
    return ranges, len(starts)
