"""A result's tables changed after the run are not written as fluxpart's (round mistakes37).

Known-truth recovery on invented data (the fictional Quillmoor grassland of
``fluxpart.demo``). Outside facts: 1 g C is 44.01 / 12.011 g CO2 (molar masses, IUPAC
standard atomic weights (m)); a shallow copy under pandas copy-on-write keeps its values
when the original changes (pandas documentation, "Copy-on-Write" (m)).
"""
import pickle
import re

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
def demo_result(demo_default_run):
    """The session's default run of demo seed 0 (shared: a test that changes its tables
    puts them back in a ``finally`` or changes a pickled copy)."""
    return demo_default_run[2]


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


def test_a_renamed_index_or_retyped_index_is_a_change():
    """Round review42: ``Index.equals`` and ``DataFrame.equals`` compare values only
    (pandas documentation (m)), so a renamed index (``annual.index.name = "yr"``) passed
    and was written as a column ``yr`` with no unit, sealed as fluxpart's. Known-truth
    recovery on invented numbers: unchanged tables stay unchanged, each relabelling is
    named."""
    annual = pd.DataFrame({"nee": [-241.4, -198.2]},
                          index=pd.Index([2021, 2022], name="year"))
    kept = kept_tables({"annual": annual})
    assert changed_tables(kept, {"annual": annual}) == []
    annual.index.name = "yr"                              # in place, values unchanged
    assert changed_tables(kept, {"annual": annual}) == [
        "annual (index renamed 'year' -> 'yr')"]
    annual.index.name = "year"
    assert changed_tables(kept, {"annual": annual}) == []
    annual.columns.name = "quantity"
    assert changed_tables(kept, {"annual": annual}) == ["annual (column labels renamed)"]
    annual.columns.name = None
    floats = annual.set_axis(pd.Index([2021.0, 2022.0], name="year"))
    assert changed_tables(kept, {"annual": floats}) == [
        "annual (index type int64 -> float64)"]


def test_a_renamed_index_is_not_written(demo_result, tmp_path):
    """The same through Result.write (round review42): refused, nothing written."""
    result = pickle.loads(pickle.dumps(demo_result))      # its own tables to change
    result.write(tmp_path / "first")
    result.write(tmp_path / "first")                      # written twice: no change
    result.annual.index.name = "budget_year"
    with pytest.raises(OutputError, match="index renamed 'year' -> 'budget_year'"):
        result.write(tmp_path / "renamed")
    assert not (tmp_path / "renamed").exists()


def test_attrs_written_into_the_file_are_a_change(demo_result, tmp_path):
    """Round review42: ``store.write_table`` writes a frame's ``attrs`` ``site``,
    ``interval_minutes`` and ``time_convention`` into the file, sealed by the manifest;
    changed in place they passed ``changed_tables`` (``DataFrame.equals`` ignores attrs,
    pandas documentation (m)) and a half-hourly result was written as hourly. The units
    in ``attrs`` are not written (the schema's are): changing them is no change.
    Known-truth recovery on the invented Quillmoor grassland: the record length is 30 min
    (``fluxpart.demo``)."""
    result = pickle.loads(pickle.dumps(demo_result))
    assert result.timeseries.attrs["interval_minutes"] == 30
    result.annual.attrs["units"] = {"nee": "g CO2 m-2"}   # not written: no change
    result.write(tmp_path / "units")
    result.timeseries.attrs["interval_minutes"] = 60
    with pytest.raises(OutputError, match=r"timeseries \(attrs 'interval_minutes' changed\)"):
        result.write(tmp_path / "hourly")
    assert not (tmp_path / "hourly").exists()
    result.timeseries.attrs["interval_minutes"] = 30
    result.write(tmp_path / "again")
    assert (fluxpart.load(tmp_path / "again").timeseries.attrs["interval_minutes"] == 30)


def test_a_parameter_table_added_or_removed_is_a_change(demo_result, tmp_path):
    """Round review42: ``result.parameters`` is a dict, changeable in a frozen Result; a
    table added there was written as ``parameters_<name>.parquet`` and sealed as
    fluxpart's, one removed left out, both unnoticed. Known-truth recovery on the
    invented Quillmoor grassland: the tables of the run as computed write unchanged."""
    result = pickle.loads(pickle.dumps(demo_result))
    result.parameters["my_fit"] = pd.DataFrame({"a": [1.0]})
    with pytest.raises(OutputError, match=r"parameters_my_fit \(table added\)"):
        result.write(tmp_path / "added")
    del result.parameters["my_fit"]
    daytime = result.parameters.pop("daytime")
    with pytest.raises(OutputError, match=r"parameters_daytime \(table removed\)"):
        result.write(tmp_path / "removed")
    assert not (tmp_path / "added").exists() and not (tmp_path / "removed").exists()
    result.parameters["daytime"] = daytime
    result.write(tmp_path / "as_computed")
    assert (tmp_path / "as_computed" / "parameters_daytime.parquet").is_file()


def test_a_table_exchanged_by_replace_or_changed_before_pickling_is_not_written(
        demo_result, tmp_path):
    """Round mistakes39: ``dataclasses.replace(result, annual=converted)`` (the way to change
    a frozen dataclass) and a result converted in a worker and pickled back (or copied)
    made copies of the changed tables their "as computed" ones: the folder was written
    and sealed with annual NEE -884.7 (g CO2, 1 g C = 44.01 / 12.011 g CO2, IUPAC atomic
    weights (m)) under its g C m-2 description. Known-truth recovery on the invented
    Quillmoor grassland: the result as computed still writes, each exchange is named."""
    import copy
    import dataclasses

    result = demo_result
    converted = result.annual.assign(nee=result.annual["nee"] * 44.01 / 12.011)
    replaced = dataclasses.replace(result, annual=converted)
    with pytest.raises(OutputError, match=r"annual \(column 'nee' changed\)"):
        replaced.write(tmp_path / "replaced")
    edited = pickle.loads(pickle.dumps(result))
    edited.annual["nee"] *= 44.01 / 12.011
    for name, again in (("pickled", pickle.loads(pickle.dumps(edited))),
                        ("copied", copy.copy(edited))):
        with pytest.raises(OutputError, match=r"annual \(column 'nee' changed\)"):
            again.write(tmp_path / name)
    for field, value, named in (
            ("config", fluxpart.Config(seed=7), "config (changed)"),
            ("site", dataclasses.replace(result.site, latitude=-49.3), "site (changed)"),
            ("warnings", result.warnings + ("a note of mine",), "warnings (changed)")):
        with pytest.raises(OutputError, match=re.escape(named)):
            dataclasses.replace(result, **{field: value}).write(tmp_path / field)
    assert not any(tmp_path.iterdir())
    # unchanged through replace, pickling and copying: written
    for name, same in (("replace", dataclasses.replace(result)),
                       ("pickle", pickle.loads(pickle.dumps(result))),
                       ("deepcopy", copy.deepcopy(result))):
        same.write(tmp_path / name)
    assert fluxpart.load(tmp_path / "deepcopy").annual["nee"].iloc[0] == pytest.approx(
        result.annual["nee"].iloc[0])


def test_a_dataset_of_changed_tables_is_refused(demo_result):
    """Round mistakes39: ``result.annual["nee"] *= 44.01 / 12.011`` then ``to_xarray()``
    gave ``nee_annual_sum`` -884.7 labelled "g m-2 ... grams of carbon" (the grassland's
    -241.4 g C m-2 in g CO2, IUPAC atomic weights (m)); now refused, as write is. A
    result as computed, with only its provenance exchanged or a column added (neither is
    exported), exports."""
    import dataclasses

    pytest.importorskip("xarray")
    result = pickle.loads(pickle.dumps(demo_result))
    assert "nee_annual_sum" in dataclasses.replace(result, provenance={}).to_xarray()
    result.annual["nee_g_co2"] = result.annual["nee"] * 44.01 / 12.011   # not exported
    assert "nee_g_co2" not in str(result.to_xarray().data_vars)
    result.annual["nee"] *= 44.01 / 12.011
    with pytest.raises(fluxpart.FluxpartError, match=r"annual \(column 'nee' changed\)"):
        result.to_xarray()
    with pytest.raises(fluxpart.FluxpartError, match=r"annual \(column 'nee' changed\)"):
        pickle.loads(pickle.dumps(result)).to_xarray()
