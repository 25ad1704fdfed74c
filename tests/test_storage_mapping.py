"""Storage mapping mistakes (round mistakes38): a column labelled NEE mapped beside a
storage column (`fluxpart.storage_labels`), a flux mapped as the storage column
(`fluxpart.column_faults.flux_as_storage`); a storage column left unmapped, or read in
another unit than the flux (round mistakes40).

Source of every check: NEE is the turbulent flux plus the change of the CO2 stored below
the sensor (Finnigan 2006, Agric. For. Meteorol. 136:108-113; a fact of the trade), so a
column labelled NEE already holds the storage term.
"""
import shutil
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from test_column_faults import stored_below_sensor

from fluxpart.column_faults import (
    flux_as_storage,
    slope_reads_turbulent,
    storage_in_turbulent_flux,
)
from fluxpart.errors import ImplausibleValueError
from fluxpart.io import read_input, read_site_config
from fluxpart.storage_labels import (
    label_words,
    nee_label_beside_storage,
    storage_unit_apart,
    unmapped_storage_column,
)

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.mark.parametrize("name, named", [
    ("NEE", True), ("nee_umol", True), ("NEP_30min", True), ("co2 NEE [umol m-2 s-1]", True),
    ("co2_turb", False), ("NEE_turb", False), ("nee eddy covariance", False),
    ("needle_temp", False), ("co2_flux", False), ("NEE_no_storage", False),
    ("nee (without storage)", False)])
def test_only_a_name_with_the_word_nee_or_nep_reads_as_nee(name, named):
    """A word of the name, not a part of one ("needle"), and not where the name says the
    turbulent part alone."""
    assert (nee_label_beside_storage(name, "store") is not None) is named
    assert "nee" not in label_words("needle_temp")


def test_the_values_resolve_a_turbulent_flux_on_a_store_that_trades_against_it():
    """Invented mass balance of a store vented by the wind (the helper of
    test_column_faults): the turbulent flux falls with the storage term (slope about -1),
    NEE does not; only the former reads as turbulent, so a label would not overrule it."""
    stamps, nee, turbulent, storage = stored_below_sensor()
    assert slope_reads_turbulent(turbulent, storage, stamps)
    assert not slope_reads_turbulent(nee, storage, stamps)
    assert storage_in_turbulent_flux(turbulent, storage, stamps) is None


def _maize_copy(tmp_path, holds_storage=False, label=None, flux_as_storage=False):
    """The maize example (invented site) copied: its flux column relabelled `label` and,
    where `holds_storage`, holding its storage column's values added (NEE written so);
    where `flux_as_storage`, a column of the flux plus storage (NEE) added and mapped as
    storage. Returns the copy's config."""
    folder = tmp_path / "quillmoor_maize_logger"
    shutil.copytree(EXAMPLES / "quillmoor_maize_logger", folder)
    config = (EXAMPLES / "quillmoor_maize_logger.toml").read_text()
    text = config.split("[input.columns]")[1]
    flux = text.split('nee = "')[1].split('"')[0]
    store = text.split('storage = "')[1].split('"')[0]
    for path in folder.glob("*.dat"):
        lines = path.read_text(encoding="latin-1").splitlines()
        header = lines[1].split(";")
        i, j = header.index(flux), header.index(store)
        if label:
            lines[1] = lines[1].replace(flux, label, 1)
        if flux_as_storage:
            lines[1] += ";co2_total"
            lines[2] += ";umol m-2 s-1"
        for number, line in enumerate(lines[3:], start=3):
            cells = line.split(";")
            total = "-9999"
            if "-9999" not in (cells[i], cells[j]):
                value = float(cells[i].replace(",", ".")) + float(cells[j].replace(",", "."))
                total = f"{value:.3f}".replace(".", ",")
            if holds_storage:
                cells[i] = total
            lines[number] = ";".join(cells + [total] * flux_as_storage)
        path.write_text("\n".join(lines) + "\n", encoding="latin-1")
    if label:
        config = config.replace(f'nee = "{flux}"', f'nee = "{label}"')
    if flux_as_storage:
        config = config.replace(f'storage = "{store}"', 'storage = "co2_total"')
    (tmp_path / "site.toml").write_text(config)
    return tmp_path / "site.toml"


def _label_warnings(config):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, report = read_input(read_site_config(config))
    return [text for text in report.warnings if "is labelled NEE" in text]


def test_nee_written_with_its_storage_and_labelled_nee_is_named(tmp_path):
    """The maize example's flux written with its storage added and labelled "NEE": the
    reader adds the storage column again (nighttime GPP +352.4, Reco +357.2 g C m-2,
    measured by round mistakes38) and said nothing, the smooth storage column leaving
    the slope unresolved; now named with both columns and the fix."""
    named = _label_warnings(_maize_copy(tmp_path, holds_storage=True, label="NEE"))
    assert len(named) == 1
    assert named[0].startswith("storage: the column mapped as nee ('NEE') is labelled NEE")
    assert "remove the storage mapping" in named[0]


# ------------------------------------------------------------ a flux mapped as storage


def test_a_flux_mapped_as_storage_is_named_and_a_storage_term_is_not():
    """Invented vented store (the helper of test_column_faults): the storage term, its
    opposite and a tenth of it are no flux (correlation with the turbulent flux about
    0.04); NEE (flux + storage) mapped as storage is named, with the sense; NEP (its
    negative) is named as moving against the flux."""
    stamps, nee, turbulent, storage = stored_below_sensor()
    for term in (storage, -storage, 0.1 * storage):
        assert flux_as_storage(turbulent, term, stamps) is None
    named = flux_as_storage(turbulent, nee, stamps, {"nee": "flux", "storage": "store"})
    assert named.startswith("the storage column ('store') looks like a flux")
    assert "moves with the flux in 'flux'" in named
    against = flux_as_storage(turbulent, -nee, stamps)
    assert "moves against" in against and "cancels the flux" in against


def test_a_storage_term_ruling_a_winter_flux_is_no_flux():
    """Invented vented store without uptake (a dormant season; seed 1): the turbulent
    flux is NEE minus the storage term, so the two correlate at -0.93 record by record;
    the NEE they form is respiration (a fact of the trade: an ecosystem emits at night),
    so the column is no NEP; refused as a flux before review44. NEP itself in the growing
    season is still named (above)."""
    stamps, nee, turbulent, storage = stored_below_sensor(days=60, noise=0.3, seed=1,
                                                          uptake=0.0)
    assert np.corrcoef(turbulent, storage)[0, 1] < -0.9
    assert flux_as_storage(turbulent, storage, stamps) is None
    assert storage_in_turbulent_flux(turbulent, storage, stamps) is None


def test_fewer_than_fourteen_days_are_not_judged():
    """13 days of paired records: too few to be judged; 15 days at 30 min are judged."""
    stamps, nee, turbulent, _ = stored_below_sensor(days=20)
    short = np.where(stamps < stamps[0] + pd.Timedelta(days=13), nee, np.nan)
    assert flux_as_storage(turbulent, short, stamps) is None
    enough = np.where(stamps < stamps[0] + pd.Timedelta(days=15), nee, np.nan)
    assert flux_as_storage(turbulent, enough, stamps) is not None


def test_the_maize_example_storage_column_is_no_flux():
    """The maize example's own storage column (a smooth daily course): correlation with
    its flux +0.16, quiet."""
    frames = [pd.read_csv(path, sep=";", decimal=",", skiprows=[0, 2], encoding="latin-1",
                          na_values=[-9999])
              for path in sorted((EXAMPLES / "quillmoor_maize_logger").glob("*.dat"))]
    data = pd.concat(frames)
    config = (EXAMPLES / "quillmoor_maize_logger.toml").read_text().split("[input.columns]")[1]
    flux = config.split('nee = "')[1].split('"')[0]
    store = config.split('storage = "')[1].split('"')[0]
    stamps = pd.date_range("2021-01-01", periods=len(data), freq="30min")
    assert flux_as_storage(data[flux].to_numpy(), data[store].to_numpy(), stamps) is None


def test_nee_mapped_as_the_storage_column_is_refused(tmp_path):
    """The maize example with a column of its flux plus storage (NEE) mapped as storage:
    NEE counted twice (annual NEE -490.8 -> -958.7, nighttime GPP 1476.4 -> 2572.7 g C
    m-2, measured by round mistakes38) was named as a storage column of the opposite sign,
    whose fix (negating it) gives -storage as NEE; now refused with one message naming
    the column and the fix."""
    with pytest.raises(ImplausibleValueError, match=r"^storage: the storage column "
                       r"\('co2_total'\) looks like a flux, not the storage term") as caught:
        read_input(read_site_config(_maize_copy(tmp_path, flux_as_storage=True)))
    assert "remove the storage mapping" in str(caught.value)
    assert "opposite sign" not in str(caught.value)


# ------------------------------------- a storage column left out, or read in another unit


@pytest.mark.parametrize("flux, columns, named", [
    ("co2_turb", ["co2_turb", "co2_store"], True),         # the maize example's layout
    ("co2_flux", ["co2_flux", "CO2 storage [umol m-2 s-1]"], True),
    ("co2_flux", ["co2_flux", "carbon_stor"], True),
    ("NEE", ["NEE", "co2_store"], False),                   # NEE holds storage by definition
    ("NEE_turb", ["NEE_turb", "co2_store"], True),          # ... unless it says turbulent
    ("co2_flux", ["co2_flux", "H_storage", "LE_store"], False),   # heat, water: not CO2
    ("co2_flux", ["co2_flux", "co2_flux_storage_corr"], False),   # a flux, not the term
    ("co2_flux", ["co2_flux", "co2_flux"], False),
    ("co2_flux", ["co2_flux", "co2_store_flag", "co2_storage_sd"], False),   # statistics
    # review47: a storage profile's concentrations (mole fraction, density) are no term
    ("co2_flux", ["co2_flux", "co2_storage_profile_ppm", "co2_conc_storage_2m"], False),
    ("co2_flux", ["co2_flux", "co2_storage_profile"], True),
    ("co2_flux_incl_storage", ["co2_flux_incl_storage", "co2_store"], False),
    ("co2_flux_no_storage", ["co2_flux_no_storage", "co2_store"], True)])
def test_a_co2_storage_column_left_unmapped_beside_a_turbulent_flux_is_named(flux, columns,
                                                                            named):
    """NEE = turbulent flux + storage (Finnigan 2006): an unused column whose name says
    CO2 storage, beside a flux not labelled NEE, is named with the mapping to add."""
    text = unmapped_storage_column(flux, columns, [flux])
    assert (text is not None) is named
    if named:
        assert f"[input.columns] storage = {columns[1]!r}" in text


def test_a_storage_column_read_in_another_unit_than_its_flux_is_named():
    """Flux and storage term written by one program in one unit (common practice (m)):
    mg CO2 declared for nee only reads the store 1000/44.009 = 22.7 times too small
    (CO2 molar mass 44.009 g mol-1, IUPAC); the same unit, spelled either way, is quiet."""
    small = storage_unit_apart("mg CO2 m-2 s-1", None)
    assert "22.7 times too small" in small
    assert "set [input.units] storage = 'mg CO2 m-2 s-1'" in small
    assert "22.7 times too large" in storage_unit_apart(None, "mg CO2 m-2 s-1")
    assert storage_unit_apart("mg CO2 m-2 s-1", "mg CO2 m-2 s-1") is None
    assert storage_unit_apart("umol m-2 s-1", None) is None
    assert storage_unit_apart(None, None) is None


def _storage_warnings(config):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, report = read_input(read_site_config(config))
    return [text for text in report.warnings if text.startswith("storage:")]


def test_the_maize_example_read_without_its_storage_or_with_one_unit_is_named(tmp_path):
    """The maize example (invented site) with its storage mapping removed: nighttime GPP
    -320.0, Reco -322.5, daytime GPP -218.2 g C m-2, silent before round mistakes40;
    written in mg CO2 m-2 s-1 with only nee's unit declared (the store read 22.7 times
    too small): Reco -311.0, silent; both now named (the shipped example gives no storage
    warning: `test_nee_written_with_its_storage_and_labelled_nee_is_named`'s reads and
    the round's probe)."""
    config = (EXAMPLES / "quillmoor_maize_logger.toml").read_text()
    shutil.copytree(EXAMPLES / "quillmoor_maize_logger", tmp_path / "quillmoor_maize_logger")
    left_out = tmp_path / "left_out.toml"
    left_out.write_text(config.replace('storage = "co2_store"', ""))
    named = _storage_warnings(left_out)
    assert len(named) == 1 and "CO2 storage column ('co2_store')" in named[0]
    one_unit = tmp_path / "one_unit.toml"
    one_unit.write_text(config.replace("[processing]",
                                       '[input.units]\nnee = "umol/m2/s"\n'
                                       'storage = "mg CO2 m-2 s-1"\n\n[processing]'))
    # the store so read is too large for a short canopy's air, in the flux's unit not:
    # refused since round mistakes56 (GPP +7063 g C m-2, 469 sigma, warned before)
    with pytest.raises(ImplausibleValueError, match=r"^\[input.units\] storage = \"mg CO2 m-2 "
                       r"s-1\" reads the storage column 22.7 times larger .* a rise of \d+ "
                       r"µmol mol-1 .*set \[input.units\] storage = \"umol m-2 s-1\" \(or "
                       r"remove it; to keep a store that large as declared, list storage in "
                       r"\[input\] accept_units\)"):
        _storage_warnings(one_unit)
    # kept, warned, where accept_units lists storage, as the reader's other refusals: a
    # store that large rightly declared (a sensor high over a short canopy) has a way
    # through (round review80: it had none but a wrong unit or canopy)
    kept = tmp_path / "kept.toml"
    kept.write_text(one_unit.read_text().replace(
        "[input.columns]", 'accept_units = ["storage"]\n\n[input.columns]'))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, report = read_input(read_site_config(kept))
    assert report.accepted_units == ("storage",)
    assert [text for text in report.warnings if "times larger than the unit of the flux" in
            text and text.endswith("kept as declared ([input] accept_units lists storage)")]
