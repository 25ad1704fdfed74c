"""A column mapped as NEE whose name says it is gap-filled (round mistakes40,
`fluxpart.fill_labels`).

Source of the check: measured NEE has gaps (towers keep about 65 % of their half-hours,
Falge et al. 2001, Agric. For. Meteorol. 107:43-69 (m); a fact of the trade), so a flux
column labelled filled holds values that are not measurements.
"""
import warnings
from pathlib import Path

import pytest

from fluxpart.fill_labels import FILLED_LABEL_MARK, filled_nee_label
from fluxpart.io import read_input, read_site_config
from fluxpart.pipeline import check_record

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.mark.parametrize("name, named", [
    ("NEE_gapfilled", True), ("co2_flux_gf", True), ("NEE filled", True),
    ("FILLED_NEE", True), ("nee (gap-filled)", True), ("co2_exchange_imputed", True),
    ("co2_exchange", False), ("nee_not_filled", False), ("nee_unfilled", False),
    ("co2_flux_before_fill", False), ("nee_raw_gf", False), ("co2_fill_flag", False),
    ("co2_refill", False)])
def test_a_nee_column_labelled_gap_filled_is_named(name, named):
    """A word of the name ("gapfilled", "gf", "filled"; a part of one, "refill", is no
    word), not where another word says the values before filling or a flag."""
    assert (filled_nee_label(name) is not None) is named


def test_the_grassland_example_read_from_a_column_labelled_filled_is_named(tmp_path):
    """The grassland example (invented site) with its flux column renamed
    "co2_exchange_gapfilled": named by the reader (the round's probe: its gaps of up to
    3 h filled by a week's records of similar weather moved nighttime Reco by -103.4 g C
    m-2 with no word, the filled column's name being the only evidence). Where every
    gap is filled the gapless-NEE finding on the same column is left out by the
    reader's mark (one finding, one message, polish47); without the mark it stands."""
    text = (EXAMPLES / "quillmoor_grassland.csv").read_text()
    (tmp_path / "quillmoor_grassland.csv").write_text(
        text.replace("co2_exchange", "co2_exchange_gapfilled", 1))
    config = (EXAMPLES / "quillmoor_grassland.toml").read_text()
    (tmp_path / "site.toml").write_text(
        config.replace('nee = "co2_exchange"', 'nee = "co2_exchange_gapfilled"'))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        site_config = read_site_config(tmp_path / "site.toml")
        frame, report = read_input(site_config)
    named = [w for w in report.warnings if w.startswith("nee: the column mapped as nee")]
    assert len(named) == 1 and "'co2_exchange_gapfilled'" in named[0]
    assert "map the measured NEE with its gaps empty" in named[0]
    assert frame.attrs.get(FILLED_LABEL_MARK) is True
    # every gap filled (invented: interpolated, every flag accepting): the values show it
    # too (column_faults.gapless_nee), and the column is named once, by its label
    complete = frame.copy()
    complete["nee"] = complete["nee"].interpolate(limit_direction="both")
    complete["nee_flag"] = 0.0
    gapless = {}
    for marked in (True, False):
        complete.attrs = {**frame.attrs, FILLED_LABEL_MARK: marked}
        _, findings = check_record(complete, site_config.site, columns=report.columns)
        gapless[marked] = [f for f in findings if f.stage == "input (nee gapless)"]
    assert gapless[True] == [] and len(gapless[False]) == 1
    assert "'co2_exchange_gapfilled'" in gapless[False][0].message
