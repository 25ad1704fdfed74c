"""A logger file's own units row read where ``[input.units]`` names no unit (round unitsrow).

Outside sources for the factors, each named beside its case: SI prefixes (k = 1e3, c =
1e-2, h = 1e2) and 1 h = 3600 s, 1 K step = 1 °C step, T/°C = T/K - 273.15 (BIPM 2019, The
International System of Units, 9th ed., tables 7-8 and section 2.3.1 (m)); °C = (°F - 32)
x 5/9 (NIST SP 811 (2008), appendix B.9 (m)); the molar mass of CO2, 44.0095 g mol-1 from
the IUPAC standard atomic weights (C 12.011, O 15.999 (m)); 1 W = 1 J s-1 (SI), so an
energy per half hour in MJ m-2 is 1e6 / 1800 W m-2. Notations "m/s", "m s-1", "m·s⁻¹" write
one unit (BIPM 2019, section 5.4.6 (m)). The records are invented known truth
(``test_robustness_layouts26._records``, 1-4 June 2021).
"""
import numpy as np
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records

from fluxpart.errors import ImplausibleValueError
from fluxpart.row_units import row_unit

CO2_GRAMS_PER_MOLE = 44.0095          # IUPAC standard atomic weights (m)
UNSTATED_ROW = {"co2_flux": "umol/m2/s", "us": "m/s", "sw": "W/m2", "t_air": "degC",
                "vpd": "hPa"}


def _file(path, values, row, extra_rows=()):
    """The records with `row` (column name -> unit cell) under the header."""
    ends, _ = _records()
    lines = [",".join(["stamp", *NAMES]), ",".join(["TS", *[row[n] for n in NAMES]])]
    lines += [",".join(cells) for cells in extra_rows]
    lines += [",".join([f"{e:%Y-%m-%d %H:%M}"] + [f"{v:.12g}" for v in r])
              for e, r in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n")


def _clean(tmp_path):
    _, values = _records()
    _file(tmp_path / "clean.csv", values, UNSTATED_ROW)
    frame, _ = _read(tmp_path / "clean.csv", units={}, rows_after_header=1)
    return frame


#: column, index in NAMES, the unit the row writes, canonical value -> value written,
#: the variable and the factor text the note gives
FAMILIES = [
    # flux: mass of CO2 per area and time, 1 µmol = 44.0095 µg of CO2 (IUPAC (m))
    ("co2_flux", 0, "mg CO2 m-2 s-1", lambda v: v * CO2_GRAMS_PER_MOLE / 1000, "nee", "x 22.72"),
    ("co2_flux", 0, "mgCO2/m²/s", lambda v: v * CO2_GRAMS_PER_MOLE / 1000, "nee", "x 22.72"),
    # radiation: kilo = 1e3 (SI prefix); MJ m-2 per half hour = 1e6 / 1800 W m-2 (SI)
    ("sw", 2, "kW/m²", lambda v: v / 1000, "rg", "x 1000"),
    ("sw", 2, "MJ m-2", lambda v: v * 1800 / 1e6, "rg", "divided by the record interval"),
    # temperature: NIST SP 811 B.9 (°F), SI 2.3.1 (K)
    ("t_air", 3, "deg F", lambda v: v * 9 / 5 + 32, "tair", "x 0.555556 - 17.7778"),
    ("t_air", 3, "K", lambda v: v + 273.15, "tair", "- 273.15"),
    # pressure: hecto = 1e2, kilo = 1e3 (SI prefixes)
    ("vpd", 4, "kPa", lambda v: v / 10, "vpd", "x 10"),
    ("vpd", 4, "Pa", lambda v: v * 100, "vpd", "x 0.01"),
    # velocity: centi = 1e-2 (SI); 1 km h-1 = 1000 m / 3600 s (SI)
    ("us", 1, "cm/s", lambda v: v * 100, "ustar", "x 0.01"),
    ("us", 1, "km/h", lambda v: v * 3.6, "ustar", "x 0.277778"),
]


@pytest.mark.parametrize(("column", "index", "unit", "written", "name", "factor"), FAMILIES,
                         ids=[f[2] for f in FAMILIES])
def test_a_unit_the_row_writes_is_read_and_noted(tmp_path, column, index, unit, written,
                                                 name, factor):
    """The column written in `unit`, its units row saying so, [input.units] silent: read
    converted to the canonical unit, equal to the file written canonically, noted with
    the column, the unit and the factor. Before, the value checks refused it."""
    _, values = _records()
    values = values.copy()
    values[:, index] = written(values[:, index])
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {column: unit})
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    clean = _clean(tmp_path)
    # the reader's molar mass of CO2 is 44.009 g mol-1, 1e-5 from the IUPAC value
    rtol = 1e-4 if name == "nee" else 1e-9
    np.testing.assert_allclose(frame[name], clean[name], rtol=rtol, atol=1e-9)
    for other in clean.columns.drop(name):
        np.testing.assert_array_equal(frame[other], clean[other])
    told = [note for note in report.notes if note.startswith(f"column {column!r} ({name})")]
    assert len(told) == 1 and repr(unit) in told[0] and factor in told[0], report.notes
    assert report.units[name] == row_unit(name, unit)


def test_a_row_of_the_canonical_units_changes_nothing(tmp_path):
    """Kept behaviour: a row of the canonical units in any notation adds no note and no
    unit."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, {"co2_flux": "µmol m⁻² s⁻¹", "us": "m s^-1",
                                       "sw": "W m-2", "t_air": "°C", "vpd": "mbar"})
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    assert not [n for n in report.notes if "units row" in n]
    assert report.units == {}
    np.testing.assert_array_equal(frame.to_numpy(), _clean(tmp_path).to_numpy())


@pytest.mark.parametrize(("name", "cell", "spelling"), [
    ("nee", "µmol m⁻² s⁻¹", "µmol m-2 s-1"), ("nee", "umol/(m^2 s)", "umol m-2 s-1"),
    ("nee", "umolCO2/m2/s", "umol m-2 s-1"), ("nee", "gC/m2", "g C m-2"),
    ("rg", "Wm-2", "W m-2"), ("rg", "W m^-2", "W m-2"), ("tair", "degC", "degC"),
    ("tair", "°C", "°C"), ("tair", "C", "C"), ("tair", "ºF", "°F"), ("tsoil", "Deg C", "°C"),
    ("vpd", "KPA", "kPa"), ("vpd", "hPa", "hPa"), ("ustar", "m·s⁻¹", "m s-1"),
    ("rh", "%", "%"), ("rh", "1", "1"), ("rh", "fraction", "fraction"),
    ("nee", "µmol+1s-1m-2", "µmol m-2 s-1"), ("ustar", "m+1s-1", "m s-1"),
    ("ustar", "km/h", "km h-1"), ("vpd", "mbar", "mbar"), ("nee", "Âµmol m-2 s-1", "µmol m-2 s-1"),
    ("rh", "%RH", "%"), ("rg", "W/m^2 (Avg)", "W m-2"),
    ("nee", "C", None), ("vpd", "%", None), ("tair", "deg", None), ("rg", "mV", None), ("nee", "mg/m2/s", None),
])
def test_notations_of_one_unit_are_read(name, cell, spelling):
    """Notations of logger units rows (BIPM 2019, 5.4.6 (m); common practice) read as the
    unit they write; a unit of another quantity, or none the reader converts, is None."""
    assert row_unit(name, cell) == spelling


@pytest.mark.parametrize(("column", "cell", "words"), [
    ("co2_flux", "C", "a unit of tair or tsoil, not of nee"),       # ambiguous: °C or carbon
    ("vpd", "%", "a unit of rh, not of vpd"),                      # a humidity, not a deficit
    ("sw", "mV", "no unit fluxpart reads for rg"),                 # a pyranometer's signal
])
def test_a_unit_unknown_or_of_another_quantity_is_refused_naming_the_key(tmp_path, column,
                                                                        cell, words):
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {column: cell})
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    message = str(caught.value)
    name = {"co2_flux": "nee", "vpd": "vpd", "sw": "rg"}[column]
    assert repr(cell) in message and words in message
    assert f"set [input.units] {name}" in message and repr(column) in message


def test_accept_units_reads_an_unknown_row_unit_as_the_default_warned(tmp_path):
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"sw": "mV"})
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=1,
                          accept_units=("rg",))
    np.testing.assert_array_equal(frame["rg"], _clean(tmp_path)["rg"])
    assert any("'mV'" in w and "accept_units" in w for w in report.warnings)


def test_a_unit_the_config_states_is_kept_against_the_row(tmp_path):
    """Kept behaviour: [input.units] vpd = "hPa" over a row saying "kPa" reads hPa and
    names both (one of them is wrong); the row never overrides the config."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"vpd": "kPa"})
    frame, report = _read(tmp_path / "t.csv", units={"vpd": "hPa"}, rows_after_header=1)
    np.testing.assert_array_equal(frame["vpd"], _clean(tmp_path)["vpd"])
    assert any("labelled 'kPa'" in w and "one of them is wrong" in w for w in report.warnings)
    assert not [n for n in report.notes if "units row" in n]


def test_the_value_checks_judge_the_converted_values(tmp_path):
    """A row saying kW m-2 over values in W m-2: read as the row says they are 1000 times
    the largest global radiation at the surface (about 1400 W m-2 under broken cloud;
    WMO Guide, vol. I, ch. 7 (m)): refused, not kept."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"sw": "kW m-2"})
    with pytest.raises(ImplausibleValueError, match=r"'sw' \(rg"):
        _read(tmp_path / "t.csv", units={}, rows_after_header=1)


def test_a_statistics_row_alone_is_no_units_row(tmp_path):
    """A line of statistics ("Avg", "Smp") under the names states no unit: read as
    before, nothing noted or refused."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, dict.fromkeys(NAMES, "Avg"))
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    np.testing.assert_array_equal(frame.to_numpy(), _clean(tmp_path).to_numpy())
    assert not [n for n in report.notes if "units row" in n]


def _two_files(tmp_path, first_vpd, second_vpd):
    """Two files of two days each, VPD in kPa in the first (its row writing
    `first_vpd`), in hPa in the second (its row writing `second_vpd`); 1 kPa = 10 hPa
    (SI prefixes)."""
    ends, values = _records()
    half = len(ends) // 2
    first, second = values[:half].copy(), values[half:].copy()
    first[:, 4] /= 10
    for path, part, vpd, rows in (("a.csv", first, first_vpd, slice(0, half)),
                                  ("b.csv", second, second_vpd, slice(half, None))):
        lines = [",".join(["stamp", *NAMES]),
                 ",".join(["TS", *[(UNSTATED_ROW | {"vpd": vpd})[n] for n in NAMES]])]
        lines += [",".join([f"{e:%Y-%m-%d %H:%M}"] + [f"{v:.12g}" for v in r])
                  for e, r in zip(ends[rows], part, strict=True)]
        (tmp_path / path).write_text("\n".join(lines) + "\n")
    return [tmp_path / "a.csv", tmp_path / "b.csv"]


@pytest.mark.parametrize("second_vpd", ["hPa", "-", ""])
def test_files_whose_rows_write_two_units_or_one_and_none_are_judged_as_before(
        tmp_path, second_vpd):
    """Two files, one row saying kPa (values in kPa) and the other hPa or no unit ("-",
    blank; values in hPa) for VPD, the config silent: no one unit reads every file, so
    none is read from the rows; the reader's rules for a unit changed between files judge
    them as before (here warned: four days are too few for the month-by-month rule).
    Before review98, a row writing no unit took the other file's kPa: the hPa file was
    read as kPa, ten times the truth, and refused only because that VPD exceeds the
    saturation vapour pressure."""
    paths = _two_files(tmp_path, "kPa", second_vpd)
    frame, report = _read(paths, units={}, rows_after_header=1)
    _, values = _records()
    half = len(values) // 2
    assert not [n for n in report.notes if "units row" in n]
    assert any("differ between input files" in w and "'kPa'" in w for w in report.warnings)
    np.testing.assert_allclose(frame["vpd"].iloc[:half], values[:half, 4] / 10, rtol=1e-11)
    np.testing.assert_allclose(frame["vpd"].iloc[half:], values[half:, 4], rtol=1e-11)


def test_files_whose_rows_write_one_unit_or_none_are_read(tmp_path):
    """One row writing the canonical hPa and the other none: every file read in hPa,
    as before."""
    ends, values = _records()
    paths = _two_files(tmp_path, "hPa", "-")
    frame, _ = _read(paths, units={}, rows_after_header=1)
    np.testing.assert_allclose(frame["vpd"].iloc[len(ends) // 2:],
                               values[len(ends) // 2:, 4], rtol=1e-11)


def test_a_units_row_of_numbers_over_a_column_is_read_as_before(tmp_path):
    """A row writing "1" over the flux and u* (a count or a multiplier, no unit) beside
    units over the others: read as written; before, the reader stopped with a bare
    StopIteration (review98)."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"co2_flux": "1", "us": "1"})
    frame, _ = _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    np.testing.assert_array_equal(frame.to_numpy(), _clean(tmp_path).to_numpy())


def test_a_units_row_above_a_statistics_row_is_read(tmp_path):
    """A logger's two lines under the names, units then statistics ("Avg"): the units
    line is read (kW m-2 for Rg, 1 kW = 1000 W, SI prefix), the statistics line is not."""
    _, values = _records()
    values = values.copy()
    values[:, 2] = values[:, 2] / 1000
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"sw": "kW/m^2"},
          extra_rows=[["", *["Avg"] * len(NAMES)]])
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=2)
    np.testing.assert_allclose(frame["rg"], _clean(tmp_path)["rg"], rtol=1e-9, atol=1e-9)
    assert sum("read in 'kW/m^2'" in n for n in report.notes) == 1


def test_a_co2_rate_the_reader_does_not_convert_is_refused_with_its_factor(tmp_path):
    """A flux row in g CO2 m-2 d-1, the config silent: refused naming the factor to
    µmol m-2 s-1, 1e6 / 44.0095 µmol g-1 / 86400 s d-1 = 0.26299 (IUPAC molar mass (m);
    1 d = 86400 s, SI); before, read as µmol m-2 s-1 with a warning."""
    _, values = _records()
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"co2_flux": "g CO2 m-2 d-1"})
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "t.csv", units={}, rows_after_header=1)
    factor = float(str(caught.value).split("multiply the values by ")[1].split()[0])
    assert factor == pytest.approx(1e6 / CO2_GRAMS_PER_MOLE / 86400, rel=1e-4)
    assert "set [input.units] nee" in str(caught.value)


def test_one_over_rh_as_a_fraction_is_read_beside_the_file_check(tmp_path):
    """"1" over RH written as a fraction is the SI unit one (BIPM 2019, section 5.4.7
    (m)), not a number that states no unit: read x 100 (1 = 100 %, definition of per
    cent), noted, as round unitsrow reads it (guards review98's test for a row writing
    no unit)."""
    from test_robustness_layouts26 import MAPPING
    _, values = _records()
    values = values.copy()
    values[:, 4] = np.round(0.6 + 0.2 * np.sin(np.arange(len(values)) / 10), 4)
    _file(tmp_path / "t.csv", values, UNSTATED_ROW | {"vpd": "1"})
    columns = {k: v for k, v in MAPPING.items() if k != "vpd"} | {"rh": "vpd"}
    frame, report = _read(tmp_path / "t.csv", units={}, rows_after_header=1, columns=columns)
    np.testing.assert_allclose(frame["rh"], values[:, 4] * 100, rtol=1e-12)
    assert any("read in '1'" in n for n in report.notes)
