"""Numbers written with digit grouping (thousands separators), read where the separator
cannot be a decimal mark.

A spreadsheet's number format with the 1000 separator writes a radiation of 1034.5 W m-2
as "1,034.5" (decimal point) or "1.034,5" (decimal comma), a pressure of 101325 Pa as
"101'325" (Swiss) or "101 325" (SI's thin space). The separator is removed, and the
number read, only where it cannot be the decimal mark:

- a separator that is never a decimal mark: an apostrophe, a right single quote, or a
  space (plain, no-break, narrow no-break, thin);
- a point (with ``decimal = ","``) or a comma (with ``decimal = "."``) in a column that
  writes its decimals with the declared mark: in a cell that holds the declared mark
  after it ("1.034,5"), in a cell that holds it twice ("1.034.567": a number has one
  decimal mark), or in a column where another cell holds the declared mark (one column,
  one number format).

Each separator stands between groups of exactly three digits after one to three leading
digits, the first not 0 ("0.125" is never grouped), and every cell of the column holding
the separator is written so; else nothing of the column is changed and the reader's
refusals name the cell. A column of whole numbers "1.034" beside decimal-comma columns
(and no decimal comma of its own) is not read here: 1.034 with a decimal point and 1034
are both readings, which the reader refuses naming the cell.

References
----------
SI Brochure, 9th edition (BIPM 2019), section 5.4.4: digits grouped in threes separated
by a thin space, the decimal marker a point or a comma (m). Thousands separators of
spreadsheets' number formats: "," with a decimal point, "." with a decimal comma, "'" in
Switzerland (Microsoft Excel documentation of number formats and regional settings (m)).
"""

import re

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

#: Separators that are never a decimal mark: apostrophe, right single quote, spaces.
NEVER_DECIMAL = "'\u2019 \u00a0\u202f\u2009"
_CANDIDATE = {".": "[,'\u2019 \u00a0\u202f\u2009]", ",": "[.'\u2019 \u00a0\u202f\u2009]"}


def _grouped(separator: str, decimal: str) -> re.Pattern:
    sep, dec = re.escape(separator), re.escape(decimal)
    return re.compile(rf"[+-]?[1-9]\d{{0,2}}(?:{sep}\d{{3}})+(?:{dec}\d*)?")


def may_hold(text: str, decimal: str, delimiter: str) -> bool:
    """False where no cell of the file's text can hold a thousands separator (C-speed
    passes): none of the separators is in it, or the only one is the delimiter and no
    quote is (an unquoted delimiter separates fields)."""
    other = "." if decimal == "," else ","
    if any(mark in text for mark in NEVER_DECIMAL):
        return True
    return other in text and (other != delimiter or '"' in text)


def ungrouped(cells: pd.Series, decimal: str) -> tuple[pd.Series, int, np.ndarray]:
    """`cells` (text, stripped or not) with thousands separators removed where they
    cannot be a decimal mark (rules of the module); the count of cells changed and a
    mask of them (the caller names the first in its file's order).

    Parameters
    ----------
    cells : pandas.Series of str
        One column's cells as written.
    decimal : {".", ","}
        The file's declared decimal mark ([input] decimal).
    """
    if decimal not in _CANDIDATE or cells.empty:
        return cells, 0, np.zeros(len(cells), dtype=bool)
    text = pa.array(cells, type=pa.string(), from_pandas=True)
    holding = pc.fill_null(pc.match_substring_regex(text, _CANDIDATE[decimal]), False
                           ).to_numpy(zero_copy_only=False).astype(bool)
    if not holding.any():
        return cells, 0, np.zeros(len(cells), dtype=bool)
    stripped = cells.str.strip()
    changed = np.zeros(len(cells), dtype=bool)
    result = stripped.copy()
    other = "." if decimal == "," else ","
    for separator in (other, *NEVER_DECIMAL):
        has = holding & stripped.str.contains(separator, regex=False).to_numpy(dtype=bool)
        if not has.any():
            continue
        fits = stripped[has].str.fullmatch(_grouped(separator, decimal).pattern).to_numpy(
            dtype=bool)
        if not fits.all():
            return cells, 0, np.zeros(len(cells), dtype=bool)                      # the reader names the cell
        if separator == other:
            column_decimal = stripped[~has].str.contains(decimal, regex=False).any()
            cell_sure = (stripped[has].str.contains(decimal, regex=False)
                         | (stripped[has].str.count(re.escape(other)) >= 2)).any()
            if not (column_decimal or cell_sure):
                return cells, 0, np.zeros(len(cells), dtype=bool)                  # whole numbers only: two readings
        rows = np.flatnonzero(has)
        result.iloc[rows] = stripped.iloc[rows].str.replace(separator, "", regex=False)
        changed[rows] = True
    if not changed.any():
        return cells, 0, np.zeros(len(cells), dtype=bool)
    return result, int(changed.sum()), changed
