"""A result's tables changed after the run are not written as fluxpart's (round mistakes37).

Known-truth recovery on invented data (the fictional Quillmoor grassland of
``fluxpart.demo``). Outside facts: 1 g C is 44.01 / 12.011 g CO2 (molar masses, IUPAC
standard atomic weights (m)); a shallow copy under pandas copy-on-write keeps its values
when the original changes (pandas documentation, "Copy-on-Write" (m)).
"""
import pickle
import warnings

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart.errors import OutputError
from fluxpart.result_edits import changed_tables, kept_tables


def test_changed_tables_names_the_table_and_columns():
    annual = pd.DataFrame({"nee": [-241.4], "gpp_nighttime": [1420.8]},
                          index=pd.Index([2021], name="year"))
    kept = kept_tables({"annual": annual})
    assert changed_tables(kept, {"annual": annual}) == []
    annual["nee"] *= 44.01 / 12.011                       # g C -> g CO2, in place
    annual["nee_gco2"] = annual["nee"]
    found = changed_tables(kept, {"annual": annual})
    assert found == ["annual (column 'nee' changed; column 'nee_gco2' added)"]
    # the kept copy still holds the sum as computed
    assert kept["annual"]["nee"].iloc[0] == -241.4
    fewer = annual.iloc[:0]
    assert "rows 1 -> 0" in changed_tables(kept, {"annual": fewer})[0]


def test_nan_in_the_same_place_is_no_change():
    """pandas' DataFrame.equals counts NaN in the same place as equal (m)."""
    table = pd.DataFrame({"x": [1.0, np.nan]})
    assert changed_tables(kept_tables({"t": table}), {"t": table.copy()}) == []


@pytest.fixture(scope="module")
def demo_result():
    frame, _ = fluxpart.demo.site_year(seed=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        return fluxpart.process(frame, fluxpart.demo.SITE)


def test_a_sum_converted_in_place_is_not_written(demo_result, tmp_path):
    """Before round mistakes37 the folder was written with annual NEE ×3.664 (g CO2)
    under its g C m-2 description, and verify found it matching its manifest."""
    result = demo_result
    computed = result.annual["nee"].iloc[0]
    result.write(tmp_path / "as_computed")
    assert fluxpart.load(tmp_path / "as_computed").annual["nee"].iloc[0] == computed
    result.annual["nee"] *= 44.01 / 12.011
    try:
        with pytest.raises(OutputError, match=r"annual \(column 'nee' changed\)"):
            result.write(tmp_path / "edited")
        assert not (tmp_path / "edited").exists()
    finally:
        result.annual["nee"] = result._as_computed["annual"]["nee"]
    result.write(tmp_path / "restored")                      # as computed again: written
    # a copy changed by the caller leaves the result as it was
    mine = result.annual.copy()
    mine["nee"] *= 2.0
    result.write(tmp_path / "with_a_copy_changed")


def test_a_pickled_result_is_checked_after_loading(demo_result):
    back = pickle.loads(pickle.dumps(demo_result))
    assert "_as_computed" in back.__dict__
    assert changed_tables(back._as_computed, back.tables()) == []
