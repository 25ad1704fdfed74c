"""Records whose values sit one column off: a field dropped or added within one record.

A record that lost a field and gained an empty one (a value not written and a delimiter
closing the line, a cell pasted one column over) keeps the header's count of fields, so
no field count names it, and each of its values is read under its neighbour's name: the
air temperature as VPD, the soil temperature as relative humidity (readfuzz54: read in
silence where every value stayed inside its variable's plausible range). Such a record is
found by the file itself: several of its values lie far outside their own column's range
of values and every one of them lies inside the range of the column beside it.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .plain_numbers import plain_floats

#: Least count of values far outside their own column for a record to be judged; with
#: every value inside the neighbouring column's range once read one column over (at most
#: one outside where three or more are), such coincidences in one record of an ordinary
#: file are not met by chance (our choice)
LEAST_FOREIGN = 2
#: Half width of the range of a column holding one value throughout (a flag that is 0 in
#: every record): a flag of 1 stays inside, a value of another quantity not (our choice)
CONSTANT_HALF_WIDTH = 0.5
#: Quantiles spanning a column's ordinary values (the 0.1st to the 99.9th percentile:
#: a year's rare extremes inside, a foreign value of another quantity outside)
SPAN = (0.001, 0.999)
#: Share of a column's cells that must read as numbers for the column to be judged
NUMERIC_SHARE = 0.9


def _numbers(raw: pd.DataFrame, skip, decimal: str, missing) -> np.ndarray:
    """Every column of `raw` in file order as floats, `missing` codes and unreadable cells
    NaN; a column in `skip`, or whose cells mostly read as no number, all NaN (kept, so
    that each column's neighbours are those of the file)."""
    codes = np.asarray([code for code in missing if isinstance(code, (int, float))],
                       dtype=np.float64)         # a word ("#VALUE!") reads as NaN anyway
    columns = []
    for name in raw.columns:
        values = np.full(len(raw), np.nan)
        if name not in skip:
            read, written = _column_floats(raw[name], decimal)
            read[np.abs(read) > 1e30] = np.nan      # "inf", 1e38: missing to the reader
            coded = np.isin(read, codes)
            if (np.isfinite(read).sum()
                    >= NUMERIC_SHARE * max(1, written) and (~coded).any()):
                values = np.where(coded, np.nan, read)
        columns.append(values)
    return np.column_stack(columns) if columns else np.empty((len(raw), 0))


def _column_floats(column: pd.Series, decimal: str) -> tuple[np.ndarray, int]:
    """A column's cells stripped, `decimal` read as ".", as ``pd.to_numeric(...,
    errors="coerce")`` reads them (float64, a new array), and the count of cells not empty.

    A column without missing cells whose cells are all empty or plain finite numbers
    (Arrow's cast accepts no blank before or after a number, so stripping changes none of
    them) is cast as it is, without the strip, which costs more than the cast."""
    if decimal == "." and not column.isna().any():
        plain = plain_floats(column)
        if plain is not None:
            values, blank = plain
            return values, int(blank.size - blank.sum())
    text = column.astype(str).str.strip()
    if decimal != ".":
        text = text.str.replace(decimal, ".", regex=False)
    plain = plain_floats(text)
    read = plain[0] if plain is not None else np.array(pd.to_numeric(text, errors="coerce"),
                                                       dtype=np.float64)
    return read, int((text != "").sum())


def shifted_records(raw: pd.DataFrame, skip, decimal: str, missing) -> tuple[np.ndarray, int]:
    """Rows of `raw` whose values read one column off, and the shift of the first.

    Parameters
    ----------
    raw : pandas.DataFrame
        Every cell of a file as text, in the file's column order.
    skip : collection of str
        Columns not judged (the time columns).
    decimal : str
        ``[input] decimal``.
    missing : sequence of float or str
        ``[input] missing`` codes (numbers and words).

    Returns
    -------
    rows : numpy.ndarray of int
        Positions in `raw`.
    shift : int
        +1 where the first such row's values belong one column to the right of where
        they are read (a field dropped before them), -1 one column to the left (a field
        added), 0 where none.

    Notes
    -----
    A column's range is its cells' 0.1st to 99.9th percentile widened by half its width
    on each side. A row is named where at least :data:`LEAST_FOREIGN` of its values lie
    outside their own column's range and, read one column to the left or to the right,
    none of them lies outside that column's range (at most one where three or more lie
    outside their own). A column holding one value throughout spans that value
    ± :data:`CONSTANT_HALF_WIDTH`.

    References
    ----------
    Percentile fences for outliers, as Tukey's fences with quartiles (Tukey 1977,
    Exploratory Data Analysis) (m); the dropped or added field of a delimited record
    (RFC 4180, section 2: each record holds the header's count of fields) (m).
    """
    values = _numbers(raw, set(skip), decimal, missing)
    read = np.isfinite(values).any(axis=0)
    if read.sum() < LEAST_FOREIGN + 2 or len(values) < 50:
        return np.empty(0, dtype=int), 0
    low, high = np.full(values.shape[1], np.nan), np.full(values.shape[1], np.nan)
    low[read], high[read] = np.nanquantile(values[:, read], SPAN, axis=0)
    width = (high - low) / 2
    width = np.where(width > 0, width, CONSTANT_HALF_WIDTH)
    judged = np.isfinite(width)
    low, high = low - width, high + width

    def foreign(cells, lows, highs, where):
        with np.errstate(invalid="ignore"):
            return np.isfinite(cells) & where & ((cells < lows) | (cells > highs))

    own = foreign(values, low, high, judged)
    counts = own.sum(axis=1)
    candidates = np.flatnonzero(counts >= LEAST_FOREIGN)
    cells = values[candidates]
    # each cell read as the column to its right (+1) or to its left (-1)
    right = np.full_like(cells, np.nan)
    right[:, 1:] = cells[:, :-1]
    left = np.full_like(cells, np.nan)
    left[:, :-1] = cells[:, 1:]
    allowed = np.minimum(1, counts[candidates] - LEAST_FOREIGN)
    fits_right = foreign(right, low, high, judged).sum(axis=1) <= allowed
    fits_left = foreign(left, low, high, judged).sum(axis=1) <= allowed
    named = fits_right | fits_left
    shifts = np.where(fits_right, 1, -1)[named]
    return candidates[named], (int(shifts[0]) if shifts.size else 0)
