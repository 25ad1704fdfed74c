"""A column labelled NEE mapped beside a storage column (round mistakes38,
`fluxpart.storage_labels`).

Source of every check: NEE is the turbulent flux plus the change of the CO2 stored below
the sensor (Finnigan 2006, Agric. For. Meteorol. 136:108-113; a fact of the trade), so a
column labelled NEE already holds the storage term.
"""
import shutil
import warnings
from pathlib import Path

import pytest
from test_column_faults import stored_below_sensor

from fluxpart.column_faults import slope_reads_turbulent, storage_in_turbulent_flux
from fluxpart.io import read_input, read_site_config
from fluxpart.storage_labels import label_words, nee_label_beside_storage

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.mark.parametrize("name, named", [
    ("NEE", True), ("nee_umol", True), ("NEP_30min", True), ("co2 NEE [umol m-2 s-1]", True),
    ("co2_turb", False), ("NEE_turb", False), ("nee eddy covariance", False),
    ("needle_temp", False), ("co2_flux", False)])
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


def _maize_as_nee(tmp_path, holds_storage, label):
    """The maize example (invented site) whose flux column is relabelled `label` and,
    where `holds_storage`, holds its storage column's values added (NEE written so)."""
    folder = tmp_path / "quillmoor_maize_logger"
    shutil.copytree(EXAMPLES / "quillmoor_maize_logger", folder)
    config = (EXAMPLES / "quillmoor_maize_logger.toml").read_text()
    text = config.split("[input.columns]")[1]
    flux = text.split('nee = "')[1].split('"')[0]
    store = text.split('storage = "')[1].split('"')[0]
    for path in folder.glob("*.dat"):
        lines = path.read_text(encoding="latin-1").splitlines(keepends=True)
        header = lines[1].rstrip("\r\n").split(";")
        i, j = header.index(flux), header.index(store)
        lines[1] = lines[1].replace(flux, label, 1)
        for number, line in enumerate(lines[3:], start=3):
            cells = line.rstrip("\r\n").split(";")
            if holds_storage and "-9999" not in (cells[i], cells[j]):
                total = float(cells[i].replace(",", ".")) + float(cells[j].replace(",", "."))
                cells[i] = f"{total:.3f}".replace(".", ",")
            lines[number] = ";".join(cells) + line[len(line.rstrip("\r\n")):]
        path.write_text("".join(lines), encoding="latin-1")
    (tmp_path / "site.toml").write_text(config.replace(f'nee = "{flux}"', f'nee = "{label}"'))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, report = read_input(read_site_config(tmp_path / "site.toml"))
    return [text for text in report.warnings if "is labelled NEE" in text]


def test_nee_written_with_its_storage_and_labelled_nee_is_named(tmp_path):
    """The maize example's flux written with its storage added and labelled "NEE": the
    reader adds the storage column again (nighttime GPP +352.4, Reco +357.2 g C m-2,
    measured by round mistakes38) and said nothing, the smooth storage column leaving
    the slope unresolved; now named with both columns and the fix."""
    named = _maize_as_nee(tmp_path, holds_storage=True, label="NEE")
    assert len(named) == 1
    assert named[0].startswith("storage: the column mapped as nee ('NEE') is labelled NEE")
    assert "remove the storage mapping" in named[0]


def test_the_shipped_flux_name_is_not_named(tmp_path):
    """A flux column whose name holds no NEE word (the maize example's own) gives no
    label warning, whatever its values."""
    assert _maize_as_nee(tmp_path, holds_storage=True, label="co2_turb") == []
