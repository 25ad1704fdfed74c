"""Two sites' swapped input files told by their day lengths (round mistakes46).

Source: day length is set by latitude and season (Allen et al. 1998, FAO-56, eq. 34);
the Rg records are invented (clear sky times a cloud factor), a known-truth recovery.
"""

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from fluxpart.batch import swapped_input_sites
from fluxpart.manifest import MANIFEST_FILE
from fluxpart.solar import potential_radiation
from fluxpart.swapped_sites import swapped_pairs

INDEX = pd.date_range("2021-01-01", periods=365 * 24, freq="60min")


def _rg(latitude: float, seed: int) -> np.ndarray:
    """Hourly Rg at `latitude` (10.2 E, UTC+1): 75 % of the potential radiation times a
    daily cloud factor of 0.3-1 (invented)."""
    clouds = np.random.default_rng(seed).uniform(0.3, 1.0, 365).repeat(24)
    return 0.75 * potential_radiation(INDEX, latitude, 10.2, 1.0, 60) * clouds


def _record(data_latitude: float, configured: float, seed: int) -> tuple:
    return INDEX, _rg(data_latitude, seed), configured, 10.2, 1.0, 60.0


def test_two_sites_five_degrees_apart_with_swapped_files_are_named():
    records = {"north": _record(44.3, 49.3, 1), "south": _record(49.3, 44.3, 2),
               "other": _record(47.0, 47.0, 3)}
    pairs = swapped_pairs(records)
    assert [pair[0] for pair in pairs] == [("north", "south")]
    _, own_north, other_north, own_south, other_south = pairs[0]
    assert own_north > 2 * other_north and own_south > 2 * other_south


def test_sites_of_their_own_files_and_a_one_way_mistake_are_not_named():
    # each file at its own latitude: no pair; one site at a wrong latitude alone (a typo,
    # its own check's concern) is not a swap either
    right = {"north": _record(49.3, 49.3, 1), "south": _record(44.3, 44.3, 2)}
    assert swapped_pairs(right) == []
    one_way = {"north": _record(44.3, 49.3, 1), "south": _record(44.3, 44.3, 2)}
    assert swapped_pairs(one_way) == []


def test_batch_warning_names_both_sites_and_the_setting(tmp_path):
    outcomes = []
    for key, data, configured in (("north", 44.3, 49.3), ("south", 49.3, 44.3)):
        folder = tmp_path / key
        folder.mkdir()
        table = pa.table({"time": INDEX.to_numpy().astype("datetime64[us]"),
                          "rg": _rg(data, len(key))})
        pq.write_table(table, folder / "timeseries.parquet")
        (folder / MANIFEST_FILE).write_text(
            '{"site": {"latitude": %s, "longitude": 10.2, "utc_offset": 1.0}}' % configured,
            encoding="utf-8")
        outcomes.append(SimpleNamespace(key=key, status="written", directory=folder))
    warnings = swapped_input_sites(outcomes)
    assert len(warnings) == 1
    assert "'north' (latitude 49.3), 'south' (latitude 44.3)" in warnings[0]
    assert "[input] path" in warnings[0]
