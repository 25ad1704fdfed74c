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
    digits = text.str.count(r"\d").to_numpy()
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
    stamps = pd.to_datetime(text.where(~pd.Series(candidate, index=text.index)),
                            format=time_format, errors="coerce")
    numbers = _numbers(cells, missing, decimal)
    statistic: dict = {}
    for start, row in zip(starts, rows, strict=True):
        block = slice(start, row)
        if dated[row] and not any(_holds_most(stamps.iloc[block], read.iloc[row], unit)
                                  for read, unit in periods if pd.notna(read.iloc[row])):
            return none
        if not _values_agree(cells.iloc[row], numbers.iloc[block], missing, decimal,
                             statistic):
            return none
    listed = ", ".join(str(int(lines[r])) for r in rows[:3]) + (", ..." if rows.size > 3 else "")
    shown = ", ".join(repr(v) for v in dict.fromkeys(text.iloc[rows[:2]]))
    kinds = " or ".join(sorted(set().union(*statistic.values())))
    return rows, (f"{rows.size} summary line(s) among the records (lines {listed}: "
                  f"{shown}{', ...' if rows.size > 2 else ''}) hold in every value written "
                  f"the {kinds} of the records above them"
                  + (", with a date and no time of day" if dated.any() else "")
                  + ": no record, dropped")


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


def _holds_most(stamps: pd.Series, start, unit: str) -> bool:
    """Whether most of the records above a dated line fall in its day or month (a record
    ending at its midnight included)."""
    end = start + (pd.DateOffset(months=1) if unit == "M" else pd.Timedelta(days=1))
    inside = (stamps >= start) & (stamps <= end)
    return bool(inside.sum() > 0.5 * len(stamps))


def _values_agree(line: pd.Series, block: pd.DataFrame, missing: tuple, decimal: str,
                  statistic: dict) -> bool:
    """Whether every number of the summary `line` is the mean or the sum of its column in
    `block` to the decimals written (half a unit of the last one), each column one
    statistic over all lines (kept in `statistic`); two numbers at least."""
    agreed = 0
    written = _numbers(line.to_frame().T, missing, decimal).iloc[0]
    for column, value in written.items():
        if not np.isfinite(value):
            # no value: a mean or sum over a missing record is none (kept by loggers)
            if not block[column].isna().any():
                return False
            agreed += 1
            continue
        cell = str(line[column]).strip()
        places = _DECIMALS.search(cell)
        tolerance = 0.5 * 10.0 ** -(len(places[1]) if places else 0) + 1e-9 * abs(value)
        present = block[column].dropna()
        # the sum of no value is 0 (the empty sum); a mean of none is no number
        found = {name for name, got in (("mean", present.mean() if len(present) else np.nan),
                                        ("sum", present.sum()))
                 if abs(got - value) <= tolerance} & statistic.get(column, {"mean", "sum"})
        if not found:
            return False
        statistic[column] = found
        agreed += 1
    return agreed >= 2
