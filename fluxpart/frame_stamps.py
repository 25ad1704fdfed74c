"""Why a caller's frame has no usable index of stamps, named with the fix (round mistakes37).

:func:`fluxpart.process` takes a frame on a DatetimeIndex of interval starts. A frame
built in a notebook goes wrong there in a few common ways the file reader never meets:
the stamps left in a column (``pandas.read_csv`` without ``index_col``), two files
concatenated with an overlap (stamps repeated), files concatenated out of order, stamps
of local daylight-saving time (the autumn hour repeated), and stamps ``pandas.to_datetime``
could not parse (``NaT``, often a date format of day and month read the other way round).
The refusal said only "got RangeIndex" or "not strictly increasing at row N"; these
functions add what the index shows and the pandas call that mends it.

References
----------
pandas documentation, "Time series / date functionality" and ``DatetimeIndex.duplicated``,
``DataFrame.set_index``, ``DataFrame.sort_index``, ``Series.tz_localize`` (ambiguous
times at the end of daylight saving) (m).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["index_hint", "order_hint"]


def index_hint(frame: pd.DataFrame) -> str:
    """The hint for a frame whose index is not a DatetimeIndex: the column of stamps.

    Parameters
    ----------
    frame : pandas.DataFrame
        The caller's record.

    Returns
    -------
    str
        ``"; the frame's column 'time' holds stamps: ..."`` naming the first column of
        datetime type (or, failing that, a column named like a time), or a hint for an
        index of text; empty where neither is found.

    References
    ----------
    pandas documentation: ``DataFrame.set_index``, ``pandas.to_datetime`` (m).
    """
    stamped = [column for column in frame.columns
               if pd.api.types.is_datetime64_any_dtype(frame[column])]
    if not stamped:
        words = ("time", "date", "datetime", "timestamp", "stamp")
        stamped = [column for column in frame.columns
                   if isinstance(column, str) and column.strip().lower() in words]
    if stamped:
        column = stamped[0]
        parse = ("" if pd.api.types.is_datetime64_any_dtype(frame[column])
                 else f"frame[{column!r}] = pandas.to_datetime(frame[{column!r}]), then ")
        return (f"; the frame's column {column!r} holds the stamps: {parse}"
                f"frame = frame.set_index({column!r})")
    if frame.index.dtype == object or pd.api.types.is_string_dtype(frame.index):
        return ("; the index holds text: frame.index = pandas.to_datetime(frame.index, "
                "format=...) with the stamps' date format")
    return ""


def order_hint(index: pd.DatetimeIndex, row: int) -> str:
    """The likely cause of stamps that do not increase at `row`, with the fix.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The frame's tz-naive stamps.
    row : int
        The first row whose stamp is not later than the one before.

    Returns
    -------
    str
        ``"; ..."`` naming missing stamps (NaT), an hour repeated at the end of daylight
        saving, repeated stamps (an overlap) or stamps out of order; empty where none
        applies.

    References
    ----------
    pandas documentation: ``Index.duplicated``, ``DataFrame.sort_index``,
    ``DatetimeIndex.tz_localize`` (its ``ambiguous`` times) (m). Directive 2000/84/EC
    (clocks back on the last Sunday of October in the EU) (m).
    """
    missing = int(index.isna().sum())
    if missing:
        first = int(np.flatnonzero(index.isna())[0])
        return (f"; the index holds {missing} missing stamp(s) (NaT), the first at row "
                f"{first}: stamps that were not parsed (check the date format, e.g. day and "
                "month read the other way round, with pandas.to_datetime(..., format=...))")
    repeated = int(index.duplicated().sum())
    if _hour_repeated(index, row):
        return (f"; the clock went back an hour at {index[row]}: stamps of local "
                "daylight-saving time, which process() does not take; give local standard "
                "time, e.g. frame.index = frame.index.tz_localize(zone, ambiguous=...)"
                ".tz_convert(\"UTC\") for a tz-aware index converted with Site.utc_offset")
    if repeated:
        return (f"; {repeated} stamp(s) occur more than once (files concatenated with an "
                "overlap?): keep one record per stamp, e.g. "
                "frame = frame[~frame.index.duplicated(keep=\"first\")].sort_index(), "
                "after checking that the repeated records agree")
    return "; the stamps are out of order: frame = frame.sort_index()"


def _hour_repeated(index: pd.DatetimeIndex, row: int) -> bool:
    """True where the stamps of the hour before `row` occur again from `row` on, and
    the record then goes on regularly: the hour a clock on daylight-saving time repeats
    (the last Sunday of October in Europe, the first Sunday of November in North America;
    common knowledge (m))."""
    step = index[row - 1] - index[row - 2] if row >= 2 else pd.Timedelta(0)
    if step <= pd.Timedelta(0) or index[row - 1] - index[row] + step != pd.Timedelta(hours=1):
        return False
    per_hour = int(pd.Timedelta(hours=1) / step)
    after = index[row:row + per_hour]
    before = index[row - per_hour:row]
    return len(after) == per_hour and len(before) == per_hour and after.equals(before)
