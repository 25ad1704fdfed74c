"""Summary lines among a file's records: a day's or a month's means or sums under them.

A logger that keeps a daily table beside its 30-minute table, or a spreadsheet with a
subtotal under each day, writes after each day's records a line stamped with the date
alone ("2021-06-01") or labelled ("daily total"), holding the day's mean or sum of each
column; a month file may close with a line "2021-06" of the month's means. Such a line
is no record. It is dropped, with a reader note, only where that is provable: every such
line has no time of day where every record has one (or holds no digit and a summary word
as its stamp), its date or month holds most of the records above it, and every value it
writes is the mean or the sum of the records above it (back to the previous such line),
to the decimals written, one statistic a column. Anything else (a date alone that may be
a record's midnight, values that are not those of the records above) is left to the
stamp checks, which refuse it naming the lines (layouts45).
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

#: date and month forms a summary line's stamp is written in (common practice (m))
_PERIOD_FORMATS = (("%Y-%m-%d", "D"), ("%Y/%m/%d", "D"), ("%d.%m.%Y", "D"),
                   ("%d/%m/%Y", "D"), ("%m/%d/%Y", "D"), ("%Y%m%d", "D"), ("%Y-%m", "M"))
#: a stamp cell that labels a summary: no digit, a word of a day's statistic
_LABEL = re.compile(r"[^\d]*\b(total|totals|sum|mean|average|avg|daily|summary)\b[^\d]*",
                    re.IGNORECASE)
#: a value cell as a number (sign, digits, point, exponent)
_DECIMALS = re.compile(r"[.,](\d+)(?:[eE]|$)")


def summary_lines(stamp_text: pd.Series, cells: pd.DataFrame, time_format: str,
                  missing: tuple, decimal: str, lines: np.ndarray) -> tuple[np.ndarray, str]:
    """Rows that are provably summary lines of the records above them, and their account.

    Parameters
    ----------
    stamp_text : pandas.Series of str
        Each row's stamp as written (time columns joined).
    cells : pandas.DataFrame of str
        The rows' value columns as written (mapped and flag columns).
    time_format : str
        The records' stamp format (``[input] time_format``).
    missing : tuple
        The codes for no value (numbers or text).
    decimal : str
        The decimal mark.
    lines : numpy.ndarray of int
        Each row's line number in its file (1-based), for the note.

    Returns
    -------
    (numpy.ndarray of int, str)
        The rows to drop (ascending) and a note naming them and why, or ``([], "")``
        where none is, or where any candidate line fails the test (all or none).

    References
    ----------
    Loggers and spreadsheets write a day's means or totals under its records (common
    practice); the arithmetic mean and sum (any statistics text).
    """
    none = (np.array([], dtype=np.int64), "")
    text = stamp_text.astype(str).str.strip()
    if len(text) < 4 or "%H" not in time_format and "%I" not in time_format:
        return none
    digits = _digit_counts(text)
    shorter = digits < np.median(digits)
    if not shorter.any():
        return none                     # the usual file: every stamp as long as most
    labelled = text.str.fullmatch(_LABEL.pattern, case=False).to_numpy() & (digits == 0)
    # each form's reading of the shorter stamps: "01/02/2021" is a day in two forms
    periods = [(pd.to_datetime(text.where(shorter), format=form, errors="coerce"), unit)
               for form, unit in _PERIOD_FORMATS]
    dated = np.logical_or.reduce([read.notna().to_numpy() for read, _ in periods])
    candidate = labelled | dated
    if not candidate.any() or candidate.all() or candidate.sum() > 0.2 * len(text):
        return none
    if dated.any() and digits[dated].max() >= digits[~candidate].min():
        return none                     # some record also lacks a time of day
    rows = np.flatnonzero(candidate)
    starts = np.concatenate(([0], rows[:-1] + 1))
    if (rows - starts).min() < 3:
        return none
    # each record's block: the summary line closing it (records after the last: none)
    block = np.cumsum(candidate) - candidate
    records = ~candidate & (block < rows.size)
    stamps = pd.to_datetime(text[records], format=time_format, errors="coerce")
    if dated.any() and not _dates_hold_most(stamps, block[records], rows, dated, periods):
        return none
    statistic = _statistics(_numbers(cells, missing, decimal), cells, block, records, rows)
    if not statistic:
        return none
    listed = ", ".join(str(int(lines[r])) for r in rows[:3]) + (", ..." if rows.size > 3 else "")
    shown = ", ".join(repr(v) for v in dict.fromkeys(text.iloc[rows[:2]]))
    told = {kind for kinds in statistic if len(kinds) == 1 for kind in kinds}
    kinds = " or ".join(sorted(told or set().union(*statistic)))
    return rows, (f"{rows.size} summary line(s) among the records (lines {listed}: "
                  f"{shown}{', ...' if rows.size > 2 else ''}) hold in every value written "
                  f"the {kinds} of the records above them"
                  + (", with a date and no time of day" if dated.any() else "")
                  + ": no record, dropped")


def _digit_counts(text: pd.Series) -> np.ndarray:
    """Digits in each cell of `text`: ``text.str.count(r"\\d")``, the same numbers.

    Where every cell is present and ASCII (every stamp written by a logger or a
    spreadsheet), from one array of the joined cells' bytes, 0-9 only being digits there
    (for either regex engine pandas may use), and each cell's share of its running
    count: one pass, not a regex search per cell. Otherwise pandas' count.
    """
    if text.isna().any() or not text.str.isascii().all():
        return text.str.count(r"\d").to_numpy()
    lengths = text.str.len().to_numpy(dtype=np.int64)
    codes = np.frombuffer("".join(text.tolist()).encode("ascii"), dtype=np.uint8)
    running = np.zeros(codes.size + 1, dtype=np.int64)      # digits before each byte
    np.cumsum((codes >= 48) & (codes <= 57), out=running[1:])
    ends = np.cumsum(lengths)
    return running[ends] - running[ends - lengths]


def _numbers(cells: pd.DataFrame, missing: tuple, decimal: str) -> pd.DataFrame:
    """The cells as floats, no value (a missing code, blank or text) as NaN."""
    codes = {str(code).strip() for code in missing}
    out = {}
    for column in cells.columns:
        written = cells[column].astype(str).str.strip()
        if decimal == ",":
            written = written.str.replace(",", ".", regex=False)
        values = pd.to_numeric(written, errors="coerce")
        numeric_codes = pd.to_numeric(pd.Series(sorted(codes)), errors="coerce").dropna()
        out[column] = values.mask(cells[column].astype(str).str.strip().isin(codes)
                                  | values.isin(numeric_codes.to_numpy()))
    return pd.DataFrame(out)


def _dates_hold_most(stamps: pd.Series, block: np.ndarray, rows: np.ndarray,
                     dated: np.ndarray, periods: list) -> bool:
    """Whether the date or month of every dated summary line holds most of the records
    of its block (a record ending at its closing midnight included), in one of the
    forms the line's stamp reads in."""
    held = np.zeros(rows.size, dtype=bool)
    counts = np.bincount(block, minlength=rows.size)
    for read, unit in periods:
        start = read.to_numpy()[rows]
        end = ((pd.DatetimeIndex(start) + pd.DateOffset(months=1)).to_numpy() if unit == "M"
               else start + np.timedelta64(1, "D"))
        written = stamps.to_numpy()
        inside = (written >= start[block]) & (written <= end[block])
        held |= np.bincount(block, weights=inside, minlength=rows.size) > 0.5 * counts
    return bool(held[dated[rows]].all())


def _statistics(numbers: pd.DataFrame, cells: pd.DataFrame, block: np.ndarray,
                records: np.ndarray, rows: np.ndarray) -> list:
    """The statistic ({"mean"}, {"sum"} or both) of each column where every number of
    every summary line is the mean or the sum of its column over its block's records to
    the decimals written (half a unit of the last one), one statistic a column over all
    lines; a cell of no value only where a record of its block has none (a logger's mean
    over a missing record is none); the sum of no value is 0 (the empty sum). [] where a
    line fails, or agrees in fewer than two cells."""
    grouped = numbers[records].groupby(block[records])
    means = grouped.mean().reindex(range(rows.size)).to_numpy()
    sums = grouped.sum().reindex(range(rows.size)).fillna(0.0).to_numpy()
    sizes = np.bincount(block[records], minlength=rows.size)[:, None]
    lacking = (sizes - grouped.count().reindex(range(rows.size)).fillna(0).to_numpy()) > 0
    written = numbers.to_numpy()[rows]
    places = cells.iloc[rows].apply(lambda column: column.astype(str).str.strip().str.extract(
        _DECIMALS.pattern, expand=False).str.len()).fillna(0).to_numpy(dtype=float)
    tolerance = 0.5 * 10.0 ** -places + 1e-9 * np.abs(np.nan_to_num(written))
    finite = np.isfinite(written)
    if (~finite & ~lacking).any():
        return []
    with np.errstate(invalid="ignore"):
        by_mean = ~finite | (np.abs(means - written) <= tolerance)
        by_sum = ~finite | (np.abs(sums - written) <= tolerance)
    found = []
    for j in range(written.shape[1]):
        kinds = {name for name, ok in (("mean", by_mean[:, j]), ("sum", by_sum[:, j]))
                 if ok.all()}
        if not kinds:
            return []
        found.append(kinds)
    return found if (finite | lacking).sum(axis=1).min() >= 2 else []
