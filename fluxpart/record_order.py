"""A file's records out of time order where their order is provably explained.

Two layouts put every record of a file out of time order with no record touched: a
table sorted by another column (a quality flag, NEE) in a spreadsheet or a database
query, and whole days written in reverse order, or each day (or month) newest first in
a file of them. Both are read in time order, with a reader note, only where sorting
cannot misplace a record: every stamp unique and on the records' grid, and the file's
order explained by one of the two (:func:`time_order`). A clock reset, whose records
carry a wrong time, fails these tests (its stamps jump into another period or repeat,
and no column orders the file) and keeps its refusal (``stamp_sequence.check_order``).
"""
from __future__ import annotations

import numpy as np
import pandas as pd


def time_order(stamps: pd.DatetimeIndex, cells: pd.DataFrame) -> tuple[np.ndarray | None, str]:
    """The row order that puts a file's records in time order, and a note saying why it
    may, or ``(None, "")`` where the file is in time order or its order is not explained.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The file's stamps in file order.
    cells : pandas.DataFrame of str
        The file's other columns as written (the time columns left out).

    Returns
    -------
    (numpy.ndarray of int or None, str)
        Positions in file order of the records in time order, and the note's text.

    References
    ----------
    Spreadsheets and SQL's ORDER BY sort rows by any column, ascending or descending
    (common practice); loggers and portals write day or month files newest first
    (common practice).
    """
    if len(stamps) < 4 or stamps.is_monotonic_increasing or not stamps.is_unique:
        return None, ""
    order = np.argsort(np.asarray(stamps), kind="stable")
    ordered = stamps[order]
    interval = pd.Series(ordered[1:] - ordered[:-1]).mode().iloc[0]
    if interval <= pd.Timedelta(0) or ((ordered - ordered[0]) % interval).any():
        return None, ""                 # a stamp off the records' grid
    complete = len(ordered) == (ordered[-1] - ordered[0]) / interval + 1
    column = _ordering_column(stamps, cells, complete)
    if column:
        return order, (f"its records are sorted by column {column!r}, not by time (every "
                       "stamp unique and on the records' grid, no clock reset possible): "
                       "read in time order")
    blocks = _whole_days_out_of_order(stamps, interval)
    if blocks:
        return order, (f"its records are {blocks} whole days or months out of time order, "
                       "each in or against time order (every stamp unique, the blocks "
                       "meeting without a gap or overlap): read in time order")
    return None, ""


def _ordering_column(stamps: pd.DatetimeIndex, cells: pd.DataFrame, complete: bool) -> str:
    """The first column whose numbers are monotone in file order (cells of no number
    together at one end), or "", asked only where no clock reset can explain the order:
    the stamps `complete` (every record interval from the first to the last once: a
    block written under a wrong time leaves a gap where it belongs), or the file's runs
    in time order interleaving (in time order the records pass between runs more than
    twice a run, as no clock reset's do).
    """
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    run = np.concatenate(([0], np.cumsum(steps < 0)))
    passes = int((np.diff(run[np.argsort(np.asarray(stamps), kind="stable")]) != 0).sum())
    if not complete and passes <= 2 * (int(run[-1]) + 1):
        return ""
    for name in cells.columns:
        values = pd.to_numeric(cells[name].astype(str).str.strip(), errors="coerce").to_numpy()
        present = np.flatnonzero(np.isfinite(values))
        if present.size < 2 or np.unique(values[present]).size < 2:
            continue
        if present[-1] - present[0] + 1 != present.size:
            continue                    # cells of no number among the numbers
        step = np.diff(values[present])
        if (step >= 0).all() or (step <= 0).all():
            return str(name)
    return ""


def _whole_days_out_of_order(stamps: pd.DatetimeIndex, interval: pd.Timedelta) -> int:
    """The count of blocks where the file is whole days (or months) each in or against
    time order, one record interval apart within a block, which put in time order meet
    without a gap or an overlap; 0 otherwise."""
    steps = stamps[1:] - stamps[:-1]
    cuts = np.flatnonzero((steps != interval) & (steps != -interval)) + 1
    edges = np.concatenate(([0], cuts, [len(stamps)]))
    blocks = []
    for start, end in zip(edges[:-1], edges[1:], strict=True):
        inner = steps[start:end - 1]
        if end - start < 2 or not ((inner == interval).all() or (inner == -interval).all()):
            return 0
        blocks.append((stamps[start:end].min(), stamps[start:end].max()))
    if len(blocks) < 2:
        return 0
    blocks.sort()
    if any(later[0] - earlier[1] != interval
           for earlier, later in zip(blocks[:-1], blocks[1:], strict=True)):
        return 0
    # every cut at a day's edge: the records of end stamps close at midnight, of start
    # stamps open there (one of the two throughout)
    firsts = pd.DatetimeIndex([b[0] for b in blocks[1:]])
    lasts = pd.DatetimeIndex([b[1] for b in blocks[:-1]])
    if not ((lasts == lasts.normalize()).all() or (firsts == firsts.normalize()).all()):
        return 0
    return len(blocks)
