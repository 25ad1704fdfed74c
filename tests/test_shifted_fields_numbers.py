"""The shifted-fields check's numbers read as pandas' ``to_numeric`` reads them.

Outside reference: ``pandas.to_numeric(..., errors="coerce")`` on the stripped cells, the
general-purpose parser the check used before its Arrow fast path (round speed60); the
cells are invented.
"""
import numpy as np
import pandas as pd
import pytest

from fluxpart.shifted_fields import _column_floats, _numbers

ODD_CELLS = ["", "  ", " 1.5", "1.5\t", "-0", "1e400", "nan", "x", "NaN", "inf", "-9999",
             "1,5", "\u22121", "+.5e-3", "1\u2003"]


def _pandas_reading(column, decimal):
    """The check's reading before round speed60: strip, decimal mark, ``to_numeric``."""
    text = column.astype(str).str.strip()
    if decimal != ".":
        text = text.str.replace(decimal, ".", regex=False)
    return (np.array(pd.to_numeric(text, errors="coerce"), dtype=np.float64),
            int((text != "").sum()))


@pytest.mark.parametrize("decimal", [".", ","])
@pytest.mark.parametrize("dtype", ["str", object])
def test_column_floats_equal_pandas_reading(decimal, dtype):
    """Numbers in five formats, alone and with each odd cell (blank, padded, words,
    overflow, a decimal comma), with and without a missing cell: the same values (NaN
    where pandas gives NaN; a zero's sign aside, which no range comparison sees) and the
    same count of cells written."""
    rng = np.random.default_rng(7)
    x = rng.standard_normal(2000) * 10.0 ** rng.integers(-6, 6, 2000)
    for fmt in ("{!r}", "{:.6g}", "{:.17g}", "{:.3e}", "{:.2f}"):
        cells = [fmt.format(v) for v in x]
        if decimal == ",":
            cells = [cell.replace(".", ",") for cell in cells]
        for extra in [[], *([odd] for odd in ODD_CELLS), [None], ODD_CELLS]:
            column = pd.Series(cells + extra, dtype=dtype)
            got, written = _column_floats(column, decimal)
            expected, expected_written = _pandas_reading(column, decimal)
            assert written == expected_written
            np.testing.assert_array_equal(got, expected)
            got[:1] = 0.0                      # a new array: the caller writes into it


def test_numbers_of_a_frame_equal_pandas_reading_with_codes():
    """Whole frames: a missing code and a skipped column as before the fast path."""
    rng = np.random.default_rng(3)
    frame = pd.DataFrame({name: [f"{v:.3f}" for v in rng.normal(loc, 2, 500)]
                          for name, loc in (("tair", 12), ("vpd", 5), ("rh", 70))},
                         dtype="str")
    frame.loc[::17, "vpd"] = "-9999"
    frame["stamp"] = [f"2021-01-01 {i % 24:02d}:00" for i in range(500)]
    got = _numbers(frame, {"stamp"}, ".", [-9999])
    assert np.isnan(got[:, 3]).all()
    for position, name in enumerate(("tair", "vpd", "rh")):
        expected, _ = _pandas_reading(frame[name], ".")
        expected[expected == -9999] = np.nan
        np.testing.assert_array_equal(got[:, position], expected)
