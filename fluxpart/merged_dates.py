"""A date written on the first record of each day only (a spreadsheet's merged cells).

A sheet laid out for people writes the date once, in a cell merged over the day's rows,
and the time of day on every row; saved as CSV the date stands on each day's first
record and the cell is empty on the others. Read as written those records have no date
(refused, naming a stamp " 00:30"). The layout is provable where the stamp is written over
several columns, the first of them (the date) is empty on some records and filled on the
first, every other time column is filled on every record, and each written date differs
from the one written before it (a date written where it changes, never twice in a row: a
date left out by mistake inside a day leaves the same date written on both sides), and
the records under each written date hold each time of day once (a day's date left out
makes the day before repeat its clock) and, where ``time_format`` reads the filled stamps,
run forwards up to the last of them (a day's date left out after a day begun or cut
short mid-day repeats no clock but turns back to the small hours, and the filled stamps
were refused as "midnight dated with the day it ends", review69; a turn at the last
record alone is that midnight written as 00:00, and left to its own refusal). The dates
are then filled down (:func:`filled_down`); else nothing is filled and the stamps without
a date are refused as before, naming one. The stamp checks that follow still refuse a repeated or
disordered stamp (round layouts48).
"""
from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from .timestamps import join_time_columns


def filled_down(raw: pd.DataFrame, time_columns,
                time_format: str | None = None) -> tuple[pd.Series, int] | None:
    """The first time column with each empty cell given the date written above it.

    Parameters
    ----------
    raw : pandas.DataFrame
        The records as text (one column a file column).
    time_columns : str or tuple of str
        ``[input] time_column``; a date written once a day is filled only where it is
        two or more columns.
    time_format : str, optional
        ``[input] time_format``, to read the filled stamps; where it reads none (a count
        of time, a form pandas cannot read) the order within a date is not judged.

    Returns
    -------
    tuple of (pandas.Series, int) or None
        The date column filled down and the number of cells filled; None where the
        layout is not the one described in the module (nothing is filled).

    References
    ----------
    Spreadsheet programs save a merged cell's value in its first cell only and leave the
    others empty (Office Open XML, ECMA-376 part 1, ``mergeCell`` (m); common practice).
    """
    if isinstance(time_columns, str) or len(time_columns) < 2:
        return None
    date = raw[time_columns[0]].astype(str).str.strip()
    empty = (date == "").to_numpy()
    if not empty.any() or empty[0] or empty.all():
        return None
    for column in time_columns[1:]:
        if (raw[column].astype(str).str.strip() == "").any():
            return None
    written = date[~empty].to_numpy()
    if (written[1:] == written[:-1]).any():
        return None
    # each date's records hold each time of day once: a block that repeats one spans
    # two days, the second day's date left out (filled down it would repeat stamps)
    block = np.cumsum(~empty)
    clock = join_time_columns(raw, tuple(time_columns[1:]))
    if pd.DataFrame({"block": block, "clock": clock.to_numpy()}).duplicated().any():
        return None
    filled = date.where(~empty).ffill()
    if time_format and _turns_back(filled + " " + clock, block, time_format):
        return None
    return filled, int(np.count_nonzero(empty))


def _turns_back(stamps: pd.Series, block: np.ndarray, time_format: str) -> bool:
    """Whether the stamps under one written date go backwards before its last record
    (two days under one date); stamps `time_format` cannot read are not judged."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            times = pd.to_datetime(stamps, format=time_format, errors="coerce").to_numpy()
    except (ValueError, TypeError, OverflowError):
        return False
    same = block[1:] == block[:-1]
    back = same & (times[1:] < times[:-1])              # NaT compares False
    last = np.r_[block[1:] != block[:-1], True]         # the last record of each date
    return bool((back & ~last[1:]).any())
