"""Arrow's string-to-double cast, the reader's and the shifted-fields check's one fast path.

Outside reference: ``pandas.to_numeric(..., errors="coerce")``, the general-purpose parser
each caller reads a column with where the cast refuses it; the cells are invented.
"""
import ast
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart.io import _plain_numbers
from fluxpart.plain_numbers import plain_floats

#: Number forms written by loggers, spreadsheets and scripts, and some that are no number:
#: an exponent, a plus sign, no digit before or after the point, digit grouping by "_",
#: padding, Arabic-Indic and full-width digits, hexadecimal, spelled infinity and NaN.
FORMS = ["1e5", "1E-05", "+1", ".5", "5.", "-.5", "0005", "-0", "1_000", " 1", "1 ",
         "\u0661\u0662", "\uff11\uff12", "0x10", "Infinity", "-inf", "NaN", "nan", "1e400",
         "1,5", "\u22121", "1d5", "--1", "e5", "0.1000000000000000055511151231257827"]


@pytest.mark.parametrize("form", FORMS)
def test_each_form_is_read_as_pandas_reads_it_or_left_to_pandas(form):
    """Alone and beside plain numbers: where the cast accepts the cell its value is
    pandas' (a zero's sign aside); where pandas reads it otherwise or not at all, the
    cast refuses the column (None), so the caller's general path decides."""
    for cells in ([form], ["2.5", form, ""]):
        column = pd.Series(cells, dtype=object)
        expected = pd.to_numeric(column.replace("", None), errors="coerce").to_numpy(float)
        plain = plain_floats(column)
        if plain is None:
            continue
        values, blank = plain
        assert np.isfinite(values[~blank]).all()
        np.testing.assert_array_equal(values, expected)
        assert blank.tolist() == [cell == "" for cell in cells]


def test_missing_cells_are_blank_and_the_reader_path_takes_them():
    """A missing cell (None or NaN, as a short row can leave) is blank, not an error: the
    reader's copy of the cast raised TypeError on one (``~`` of None) before round review84."""
    column = pd.Series(["1.5", None, "", np.nan, "-2e3"], dtype=object)
    for values, blank in (plain_floats(column), _plain_numbers(column, ".")):
        assert blank.tolist() == [False, True, True, True, False]
        np.testing.assert_array_equal(values, [1.5, np.nan, np.nan, np.nan, -2000.0])
        values[0] = 0.0                          # a new array: the caller writes into it
    assert _plain_numbers(column, ",") is None


def test_the_reader_and_the_shifted_fields_check_cast_by_one_function():
    """No second copy of the cast: only ``plain_numbers.py`` calls ``pyarrow.compute.cast``
    among the reader and the shifted-fields check (round review84 found two)."""
    root = Path(fluxpart.__file__).parent
    for name in ("io.py", "shifted_fields.py"):
        tree = ast.parse((root / name).read_text(encoding="utf-8"))
        calls = [node for node in ast.walk(tree) if isinstance(node, ast.Attribute)
                 and node.attr == "cast" and isinstance(node.value, ast.Name)
                 and node.value.id == "pc"]
        assert calls == [], name
        assert "plain_floats" in {node.id for node in ast.walk(tree)
                                  if isinstance(node, ast.Name)}, name


def test_plain_forms_take_the_cast_and_the_others_the_general_path():
    """The forms of a plain decimal number (C's strtod grammar without blanks, a fact of
    the trade's files) are read by the cast; padding, grouping, other digits, hexadecimal
    and spelled values are left to pandas, so no form changes its reading."""
    plain = ["1e5", "1E-05", "+1", ".5", "5.", "-.5", "0005", "-0"]
    assert all(plain_floats(pd.Series([form], dtype=object)) is not None for form in plain)
    other = [" 1", "1 ", "1_000", "\u0661\u0662", "\uff11\uff12", "0x10", "Infinity", "NaN",
             "1e400", "1,5", "\u22121"]
    assert all(plain_floats(pd.Series(["2.5", form], dtype=object)) is None for form in other)
