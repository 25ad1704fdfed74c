"""A CO2 flux unit that the file writes and the reader cannot convert (round mistakes36).

NEE labelled "g CO2 m-2 d-1" (in its column name or on a units line) and read as
µmol m-2 s-1 made every flux 3.8 times too large without a word: the reader judged only
the units it knows. The conversion is arithmetic: molar masses of CO2 44.009 g mol-1
(12.011 + 2 x 15.999) and of C 12.011 g mol-1 (IUPAC conventional atomic weights (m)),
86,400 s in a day and the SI prefixes (BIPM 2019 (m)).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.flux_rate_labels import rate_factor, unreadable_rate_note
from fluxpart.io import read_site_config

EXAMPLE = Path(__file__).resolve().parents[1] / "examples"
CO2, CARBON, DAY = 12.011 + 2 * 15.999, 12.011, 86400.0   # g mol-1, g mol-1, s (IUPAC, BIPM (m))


@pytest.mark.parametrize("label, expected", [
    ("g CO2 m-2 d-1", 1e6 / CO2 / DAY),
    ("gCO2/m2/d", 1e6 / CO2 / DAY),
    ("g C m-2 day-1", 1e6 / CARBON / DAY),
    ("gC/m2/d", 1e6 / CARBON / DAY),
    ("mg CO2 m-2 h-1", 1e3 / CO2 / 3600.0),
    ("mmol m^-2 s^-1", 1000.0),
    ("\u00b5mol.m-2.h-1", 1.0 / 3600.0),
    ("\u03bcmol CO2 m\u207b\u00b2 s\u207b\u00b9", 1.0),
    ("umol/m2/s", 1.0),
])
def test_rate_factor_is_the_molar_mass_and_seconds_arithmetic(label, expected):
    assert rate_factor(label) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("label", ["W m-2", "Avg", "g C m-2", "g m-2 d-1", "m s-1", "%",
                                   "kPa", "mol mol-1", "", None])
def test_no_co2_flux_unit_has_no_factor(label):
    """Another quantity, a statistic, an amount per record, or a mass of an unnamed
    species (g m-2 d-1: of CO2 or of C? 3.7 times apart) is not judged."""
    assert rate_factor(label) is None


def test_a_note_only_where_the_label_converts_otherwise():
    read = "'µmol m-2 s-1' (no [input.units] nee: its default)"
    note = unreadable_rate_note("nee", "co2_flux", "g CO2 m-2 d-1", "its name", 1.0, read)
    assert "3.8 times too large" in note and "0.262993" in note     # 1e6 / 44.009 / 86400
    small = unreadable_rate_note("nee", "co2_flux", "mmol m-2 s-1", "its name", 1.0, read)
    assert "1e+03 times too small" in small
    assert unreadable_rate_note("nee", "co2_flux", "umol m-2 s-1", "its name", 1.0, read) is None
    # mg CO2 m-2 s-1 declared (1000 / 44.009 µmol per unit) and labelled in mg per second
    assert unreadable_rate_note("nee", "co2_flux", "mg CO2 m-2 s-1", "its name", 1e3 / CO2,
                                read) is None
    assert unreadable_rate_note("tair", "T", "g CO2 m-2 d-1", "its name", 1.0, read) is None


def _example(tmp_path, name_label=None, units_cell=None, factor=1.0):
    """The invented Quillmoor grassland (known truth), NEE times `factor`, labelled."""
    records = pd.read_csv(EXAMPLE / "quillmoor_grassland.csv", dtype=str,
                          keep_default_na=False)
    nee = pd.to_numeric(records["co2_exchange"])
    records["co2_exchange"] = np.where(nee == -9999, "-9999",
                                       [f"{v:.4f}" for v in nee * factor])
    config = (EXAMPLE / "quillmoor_grassland.toml").read_text()
    column = "co2_exchange"
    if name_label is not None:
        column = f"co2_exchange [{name_label}]"
        records = records.rename(columns={"co2_exchange": column})
        config = config.replace('nee = "co2_exchange"', f'nee = "{column}"')
    text = records.to_csv(index=False)
    if units_cell is not None:
        head, rest = text.split("\n", 1)
        cells = [units_cell if c == column else "-" for c in records.columns]
        text = head + "\n" + ",".join(cells) + "\n" + rest
        config = config.replace("[input]\n", "[input]\nrows_after_header = 1\n")
    (tmp_path / "quillmoor_grassland.csv").write_text(text)
    (tmp_path / "site.toml").write_text(config)
    return read_site_config(tmp_path / "site.toml").read()


def test_nee_labelled_in_grams_of_co2_per_day_is_named_with_its_factor(tmp_path):
    """The grassland example's NEE written in g CO2 m-2 d-1 (x 3.80) under a name or a
    units line that says so: read silently before (annual NEE -241.7 -> -918.4 g C m-2,
    only 14 values beyond the range named); now the reader names the label, the factor
    and the fix. The values are read as before (a warning: the label may be stale)."""
    factor = 1.0 / (1e6 / CO2 / DAY)
    plain_frame, plain = _example(tmp_path, factor=factor)
    assert not any("labelled '" in text for text in plain.warnings)  # the path may hold the word
    frame, report = _example(tmp_path, name_label="g CO2 m-2 d-1", factor=factor)
    pd.testing.assert_frame_equal(frame, plain_frame)
    named = [text for text in report.warnings if "labelled 'g CO2 m-2 d-1' by its name" in text]
    assert len(named) == 1
    assert "3.8 times too large" in named[0] and "0.262993" in named[0]
    frame, report = _example(tmp_path, units_cell="gCO2/m2/d", factor=factor)
    named = [text for text in report.warnings if "labelled 'gCO2/m2/d' by the units line" in text]
    assert len(named) == 1 and "3.8 times too large" in named[0]


def test_the_example_labelled_in_its_own_unit_is_quiet(tmp_path):
    """µmol m-2 s-1 in any notation (BIPM 2019, 5.4.6 (m)) is the unit read: no word."""
    for label in ("umol m-2 s-1", "µmol CO2 m-2 s-1"):
        _, report = _example(tmp_path, name_label=label)
        assert not any("labelled '" in text for text in report.warnings)


@pytest.mark.parametrize("label, expected", [
    # an amount per record of 30 minutes (1800 s; BIPM 2019 (m)), as logger headers write it
    ("gC m-2 30min-1", 1e6 / CARBON / 1800.0),
    ("g CO2 m-2 30 min-1", 1e6 / CO2 / 1800.0),
    # "CO2-C": the carbon of CO2, a mass of C (common practice)
    ("g CO2-C m-2 d-1", 1e6 / CARBON / DAY),
    ("gCO2-C/m2/d", 1e6 / CARBON / DAY),
    # the species in brackets after the amount
    ("mg (CO2) m-2 s-1", 1e3 / CO2),
    ("umol(CO2) m-2 s-1", 1.0),
])
def test_labels_with_a_count_a_carbon_of_co2_or_a_bracketed_species(label, expected):
    """Before review40 these read as no CO2 flux unit (None): NEE labelled "gC m-2
    30min-1" and read as µmol m-2 s-1 (every flux 46 times too small) passed without a
    word."""
    assert rate_factor(label) == pytest.approx(expected, rel=1e-12)
    read = "'µmol m-2 s-1' (no [input.units] nee: its default)"
    note = unreadable_rate_note("nee", "co2_flux", label, "its name", 1.0, read)
    assert (note is None) == (expected == 1.0)


def test_a_mass_rate_without_its_species_is_named_with_both_factors(tmp_path):
    """Known-truth recovery: a mass rate without its species ("mg/m2/s", "g/m2/d") had
    no factor and no note before review40: the grassland example's NEE in g CO2 m-2 d-1
    under a units line "g/m2/d" was read as µmol m-2 s-1 (every flux 3.8 times too
    large) without a word. Now the label is named with the factors of CO2 and of C
    (molar masses 44.009 and 12.011 g mol-1, IUPAC (m)); read as either, it is quiet."""
    read = "'µmol m-2 s-1' (no [input.units] nee: its default)"
    note = unreadable_rate_note("nee", "co2_flux", "mg/m2/s", "its name", 1.0, read)
    assert note is not None
    assert f"{1e3 / CO2:.6g} for CO2" in note and f"{1e3 / CARBON:.6g} for C" in note
    assert "22.7 times too small" in note and "83.3 times too small" in note
    assert unreadable_rate_note("nee", "co2_flux", "mg m-2 s-1", "its name", 1e3 / CO2,
                                read) is None
    assert unreadable_rate_note("nee", "co2_flux", "W m-2", "its name", 1.0, read) is None
    # through the reader: NEE in g CO2 m-2 d-1 under "g/m2/d" (mg CO2 m-2 s-1 values are
    # refused as too small by the magnitude check before any label is read)
    _, report = _example(tmp_path, units_cell="g/m2/d", factor=1.0 / (1e6 / CO2 / DAY))
    named = [text for text in report.warnings if "labelled 'g/m2/d' by the units line" in text]
    assert len(named) == 1 and "3.8 times too large (a mass of CO2)" in named[0]
