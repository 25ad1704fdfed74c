"""A text column read as numbers by Arrow's string-to-double cast, where every cell is
missing, empty or a plain finite number: the fast path of the reader and of the
shifted-fields check.

The reader (:func:`fluxpart.io._numbers`) and the shifted-fields check
(:mod:`fluxpart.shifted_fields`, round speed60) each had their own copy of the cast;
round review84 made it one. Arrow's cast refuses a blank before or after a number,
a decimal comma, digit grouping, digits of other scripts and hexadecimal, and reads "nan"
and "inf": each of those returns None, and the caller reads the column its general way
(``pd.to_numeric``), so the cast decides no number form by itself.

References
----------
Apache Arrow, ``pyarrow.compute.cast`` (string to float64, the general-purpose reference
library; its parsing follows the C++ ``fast_float`` reader, exact to the last bit (m)).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

__all__ = ["plain_floats"]


def plain_floats(text: pd.Series):
    """The values of a text column whose every cell is missing, empty or a plain finite
    number.

    Parameters
    ----------
    text : pandas.Series
        Cells as text (object or string dtype); missing cells (None, NaN) allowed.

    Returns
    -------
    tuple of (numpy.ndarray, numpy.ndarray) or None
        ``(values, blank)``: the values as float64 [unit of the column] in a new array
        (the caller may write into it), NaN where `blank`, the boolean mask of the cells
        missing or empty. None where any cell is something else (padding, a decimal
        comma, a word, ``nan``, ``inf`` or a number beyond float64's range): the caller
        reads that column otherwise.

    Notes
    -----
    Equal bit for bit to ``pd.to_numeric(text, errors="coerce")`` on the cells it accepts
    (700,000 formatted values when the reader took it up; the forms of
    ``tests/test_shifted_fields_numbers.py``),
    but for the sign of a zero written "-0" in a column of integers, which pandas reads as
    the integer 0.

    References
    ----------
    Apache Arrow, ``pyarrow.compute.cast`` (string to float64).
    """
    try:
        cells = pa.array(text, type=pa.string(), from_pandas=True)
        blank = pc.fill_null(pc.equal(cells, ""), True)
        values = np.array(pc.cast(pc.if_else(blank, pa.scalar(None, pa.string()), cells),
                                  pa.float64()).to_numpy(zero_copy_only=False),
                          dtype=np.float64)          # a copy: the caller writes into it
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError):
        return None
    blank = np.asarray(blank.to_numpy(zero_copy_only=False), dtype=bool)
    if not np.isfinite(values[~blank]).all():
        return None
    return values, blank
