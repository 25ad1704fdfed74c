"""Numbers written with Fortran's double-precision exponent letter ("1.5D-03").

A Fortran program writing REAL(8) values with a ``D`` edit descriptor (and list-directed
output of some compilers) puts ``D`` where C and every table reader put ``E``: "1.5D-03"
is 0.0015. The letter stands between a number's digits and a signed or unsigned
exponent's, so the cell can mean nothing else; it is read with ``E``. A program writing
in the decimal-comma mode (Fortran 2003's ``DECIMAL='COMMA'``) writes "3,29D-01": in a
file read with ``decimal = ","`` such a cell is read too (round layouts56).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: a whole cell that is a number with D (either case) as its exponent letter
_D_NUMBER = r"\s*[+-]?(?:\d+\.?\d*|\.\d+)[dD][+-]?\d+\s*"
#: the same with the decimal comma of a file read with ``decimal = ","``
_D_NUMBER_COMMA = r"\s*[+-]?(?:\d+,?\d*|,\d+)[dD][+-]?\d+\s*"


def e_exponents(written: pd.Series, decimal: str = ".") -> tuple[pd.Series, int, np.ndarray]:
    """The cells of `written` with a D exponent written with E.

    Parameters
    ----------
    written : pandas.Series of str
        One column's cells as written.
    decimal : {".", ","}
        The file's decimal mark (``[input] decimal``); the D-exponent numbers are those
        written with it.

    Returns
    -------
    cells : pandas.Series of str
        `written` with each D-exponent number's letter as E (`written` itself where none).
    count : int
        Cells rewritten.
    rewritten : numpy.ndarray of bool
        Mask of the rewritten cells (the caller names the first in its file's order).

    References
    ----------
    ISO/IEC 1539-1:2018 (Fortran 2018), section 13.7.2.3.3: the D edit descriptor writes
    the exponent letter D (m); the DECIMAL= specifier of OPEN (Fortran 2003 on):
    in ``'COMMA'`` mode a comma is the decimal mark on output (m).
    """
    # only a cell holding the letter can match: the per-cell regex (Python's, as the
    # pattern's \s and \d keep pandas off pyarrow's) runs on those alone, none in most files;
    # the letter found as two plain substrings, not a regex class (half the time)
    lettered = (written.str.contains("d", regex=False, na=False).to_numpy(dtype=bool)
                | written.str.contains("D", regex=False, na=False).to_numpy(dtype=bool))
    if not lettered.any():
        return written, 0, np.zeros(len(written), dtype=bool)
    found = np.zeros(len(written), dtype=bool)
    found[lettered] = written[lettered].str.fullmatch(
        _D_NUMBER_COMMA if decimal == "," else _D_NUMBER).fillna(False).to_numpy(
        dtype=bool)
    if not found.any():
        return written, 0, np.zeros(len(written), dtype=bool)
    cells = written.copy()
    cells[found] = written[found].str.replace(r"[dD]", "E", regex=True)
    return cells, int(found.sum()), found
