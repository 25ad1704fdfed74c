"""Layouts of the layouts29 round: cells holding more than a number (a unit after it, a
mark after it, a value and its flag joined in one cell) and a header that writes one
name twice.

Outside facts, each named beside its check: SI writing of a quantity as a number, a
space and the unit symbol, and of the per cent sign after a space (BIPM SI Brochure, 9th
ed., 5.4.3 (m)); spreadsheets' custom number formats such as 0.0 "W/m2" or 0.0% save the
shown text to CSV (common practice); a mark after a value (an asterisk for an estimated
or suspect value) as statistical tables and logger editors write it (common practice);
pandas' read_csv renames a repeated header name 'x' to 'x.1' (pandas documentation,
"mangle_dupe_cols" / duplicate names (m)), checked here through pandas itself. Everything
else is invented known truth: the records as written.
"""

import io

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import InputFileError, MissingColumnError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd"]


def _records(count=96 * 4):
    """Invented half-hourly records ending at 00:30 on 1 June (local standard time)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = np.clip(800 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1)
    noise = np.random.default_rng(29).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.2 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd])


def _cells(values):
    return [[f"{v:g}" for v in row] for row in values]


def _write(path, ends, cells, names=NAMES, sep=","):
    lines = [sep.join(["stamp"] + names)]
    lines += [sep.join([f"{e:%Y-%m-%d %H:%M}"] + row) for e, row in zip(ends, cells, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


def _message(path, **options):
    with pytest.raises(InputFileError) as caught:
        _read(path, **options)
    return str(caught.value)


# ------------------------------------------------ a unit written in every cell
@pytest.mark.parametrize(("unit", "column", "sep", "decimal"), [
    (" W/m2", 2, ",", "."),      # SI: number, space, unit symbol (m)
    (" W m-2", 2, ",", "."),
    ("°C", 3, ",", "."),         # a custom number format 0.0"°C" (common practice)
    (" hPa", 4, ";", ","),       # a decimal-comma sheet with the unit after the number
])
def test_a_unit_after_every_number_is_named_with_its_fix(tmp_path, unit, column, sep, decimal):
    """Before: "if '0.5 W/m2' marks missing data, add it to [input] missing", a fix that
    blanks that one value and names the next; now the unit is named as the cause."""
    ends, values = _records()
    cells = _cells(values)
    for row in cells:
        text = row[column].replace(".", ",") if decimal == "," else row[column]
        row[column] = text + unit
    if decimal == ",":
        for row in cells:
            for k in range(len(row)):
                if k != column:
                    row[k] = row[k].replace(".", ",")
    path = tmp_path / "mast.csv"
    _write(path, ends, cells, sep=sep)
    message = _message(path, delimiter=sep, decimal=decimal)
    assert f"{unit.strip()!r} in every such cell" in message
    assert "followed by a unit" in message and "[input.units]" in message
    assert "add it to [input] missing" not in message
    # without the unit text the same records read as written (known truth)
    for row in cells:
        row[column] = row[column].removesuffix(unit)
    _write(path, ends, cells, sep=sep)
    frame, _ = _read(path, delimiter=sep, decimal=decimal, units={"vpd": "hPa"})
    name = {2: "rg", 3: "tair", 4: "vpd"}[column]
    # each in the unit the reader keeps (W m-2, °C, hPa): the values as written
    expected = values[:, column]
    assert np.allclose(frame[name].dropna().to_numpy()[:50], expected[:50], atol=1e-6)


def test_a_per_cent_sign_in_the_humidity_cells_is_named(tmp_path):
    """SI writes a space before %, spreadsheets' 0.0% format none (m); both named."""
    ends, values = _records()
    cells = _cells(values)
    rh = np.linspace(40, 95, len(cells))
    for k, row in enumerate(cells):
        row.append(f"{rh[k]:.1f}" + (" %" if k % 2 else "%"))
    path = tmp_path / "mast.csv"
    _write(path, ends, cells, names=NAMES + ["rh"])
    message = _message(path, columns=MAPPING | {"rh": "rh"})
    assert "followed by a unit" in message and "'%' in every such cell" in message


def test_a_word_after_a_number_that_is_not_every_bad_cell_keeps_the_old_hint(tmp_path):
    """A missing code among the unit cells ('n.v.') is no unit: the general hint stays."""
    ends, values = _records()
    cells = _cells(values)
    cells[3][2] += " W/m2"
    cells[9][2] = "n.v."
    path = tmp_path / "mast.csv"
    _write(path, ends, cells)
    message = _message(path)
    assert "add it to [input] missing" in message and "followed by a unit" not in message


# ------------------------------------------------ a mark after some numbers
@pytest.mark.parametrize("mark", ["*", "?", " !"])
def test_a_mark_after_some_values_names_both_readings(tmp_path, mark):
    """A mark of a suspect or estimated value may mean keep or drop; the two readings
    give other budgets, so both are named (before: "add '0.432*' to [input] missing")."""
    ends, values = _records()
    cells = _cells(values)
    for k in range(10, len(cells), 37):
        cells[k][0] += mark
    path = tmp_path / "mast.csv"
    _write(path, ends, cells)
    message = _message(path)
    assert f"{mark.strip()!r} in every such cell" in message
    assert "kept" in message and "dropped" in message
    assert "add it to [input] missing" not in message
    # the two readings differ (known truth): the marked values' sum is not zero
    marked = values[10::37, 0]
    assert abs(marked.sum()) > 0


def test_a_value_and_its_flag_in_one_cell_are_named(tmp_path):
    """'0.329|0': a value and its quality flag joined in one cell."""
    ends, values = _records()
    cells = _cells(values)
    for k, row in enumerate(cells):
        row[0] = f"{row[0]}|{k % 3}"
    path = tmp_path / "mast.csv"
    _write(path, ends, cells)
    message = _message(path)
    assert "two numbers joined by '|'" in message and "split the column" in message


# ------------------------------------------------ a name written twice in the header
def test_a_repeated_header_name_is_not_suggested_under_the_parser_s_name(tmp_path):
    """pandas reads a repeated name 't_air' as 't_air' and 't_air.1' (checked below); the message
    suggested 't_air.1', a name the file does not hold. Now the header is listed as written
    and the repeated name is named."""
    ends, values = _records()
    cells = [row + [row[3]] for row in _cells(values)]
    path = tmp_path / "mast.csv"
    _write(path, ends, cells, names=NAMES[:3] + ["t_air", "vpd", "t_air"])
    parsed = pd.read_csv(io.StringIO(path.read_text()), nrows=1)
    assert "t_air.1" in parsed.columns                      # pandas' renaming (outside fact)
    with pytest.raises(MissingColumnError) as caught:
        _read(path, columns=MAPPING | {"tsoil": "t_soil"})
    message = str(caught.value)
    assert "t_air.1" not in message
    assert "'t_air' is written more than once in the header" in message
    # mapped, the repeated name is refused as before
    assert "appears more than once" in _message(path, columns=MAPPING)
