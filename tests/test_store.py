"""Parquet tables: metadata every reader sees, labelled codes, atomic writes (issue 15)."""

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow.parquet as pq
import pytest

import fluxpart
from fluxpart.errors import InputFileError
from fluxpart.schema import file_metadata
from fluxpart.site import Site
from fluxpart.store import read_table, write_table

_SITE = Site(name="Fenwick bog (fictional)", latitude=-41.5, longitude=172.25, utc_offset=12.0)
_UNITS = {"time": ("", "start of the interval"),
          "nee_filled": ("umol m-2 s-1", "gap-filled NEE of CO2"),
          "nee_fill_quality": ("", "fill quality")}


def _frame() -> pd.DataFrame:
    index = pd.date_range("2024-01-01", periods=4, freq="30min", name="time")
    quality = pd.Categorical(["measured", "A", "unfilled", "measured"],
                             categories=["measured", "A", "B", "C", "unfilled"])
    return pd.DataFrame({"nee_filled": [1.5, -2.0, np.nan, 0.25], "nee_fill_quality": quality},
                        index=index)


def _write(tmp_path, frame=None, **kwargs) -> Path:
    path = tmp_path / "table.parquet"
    write_table(_frame() if frame is None else frame, path, _UNITS, "timeseries", **kwargs)
    return path


def test_file_metadata_holds_site_interval_time_convention_and_units(tmp_path):
    """The `fluxpart` key-value metadata (JSON) names the site, interval, convention, units."""
    path = _write(tmp_path, metadata=file_metadata(_SITE, 30))
    info = json.loads(pq.ParquetFile(path).metadata.metadata[b"fluxpart"])
    assert info["site"] == {"name": "Fenwick bog (fictional)", "latitude": -41.5,
                            "longitude": 172.25, "utc_offset": 12.0}
    assert info["interval_minutes"] == 30
    assert "start of its averaging interval" in info["time_convention"]
    assert "local standard time" in info["time_convention"]
    assert info["columns"]["nee_filled"] == {"unit": "umol m-2 s-1",
                                             "description": "gap-filled NEE of CO2"}
    assert info["table"] == "timeseries" and info["index"] == "time"


def test_frame_attrs_travel_into_the_file_and_back(tmp_path):
    """Facts set on `attrs` (as the pipeline does) reach the file; read_table restores them."""
    frame = _frame()
    frame.attrs.update(file_metadata(_SITE, 30))
    path = _write(tmp_path, frame)
    back = read_table(path)
    assert back.attrs["site"]["utc_offset"] == 12.0 and back.attrs["interval_minutes"] == 30
    assert back.attrs["units"]["nee_filled"] == "umol m-2 s-1"
    assert back.attrs["descriptions"]["nee_fill_quality"] == "fill quality"
    pd.testing.assert_frame_equal(back, frame, check_freq=False)


def test_labels_are_stored_dictionary_encoded_and_read_back(tmp_path):
    """A categorical column is a dictionary of strings in Parquet and a categorical again."""
    path = _write(tmp_path)
    field = pq.read_schema(path).field("nee_fill_quality")
    assert str(field.type) == "dictionary<values=string, indices=int8, ordered=0>"
    column = pq.ParquetFile(path).metadata.row_group(0).column(2)
    assert column.path_in_schema == "nee_fill_quality"
    assert any("DICTIONARY" in str(e) for e in column.encodings)
    back = read_table(path)["nee_fill_quality"]
    assert list(back.cat.categories) == ["measured", "A", "B", "C", "unfilled"]


def test_a_row_counter_index_is_not_stored(tmp_path):
    """Regression (issue 15): a RangeIndex left by reset_index does not leak as `index`."""
    frame = pd.DataFrame({"bin": [1, 2], "sigma": [0.5, 0.7]}).reset_index(drop=True)
    frame.index = frame.index.rename("index")
    path = tmp_path / "bins.parquet"
    write_table(frame, path, {"bin": ("1", "bin"), "sigma": ("umol m-2 s-1", "s.d.")}, "bins")
    assert pq.read_schema(path).names == ["bin", "sigma"]
    assert list(read_table(path).columns) == ["bin", "sigma"]


def test_same_content_same_bytes_and_no_temporary_left(tmp_path):
    """Determinism and atomicity: identical bytes twice, no temporary file beside them."""
    first = _write(tmp_path, metadata=file_metadata(_SITE, 30)).read_bytes()
    second = _write(tmp_path, metadata=file_metadata(_SITE, 30)).read_bytes()
    assert first == second
    assert [p.name for p in tmp_path.iterdir()] == ["table.parquet"]


def test_reading_a_foreign_file_names_it(tmp_path):
    """A Parquet file without fluxpart metadata is refused with its path named."""
    path = tmp_path / "foreign.parquet"
    pd.DataFrame({"a": [1]}).to_parquet(path)
    with pytest.raises(InputFileError, match="foreign.parquet"):
        read_table(path)


def test_duckdb_sees_units_and_site(written_demo):
    """DuckDB (a reader modellers use) finds units and the site in `parquet_kv_metadata`."""
    duckdb = pytest.importorskip("duckdb")
    _, folder = written_demo
    path = str(Path(folder) / "annual.parquet")
    rows = duckdb.sql(f"SELECT key, value FROM parquet_kv_metadata('{path}')").fetchall()
    meta = {bytes(key).decode() if not isinstance(key, str) else key: value
            for key, value in rows}
    value = meta["fluxpart"]
    info = json.loads(bytes(value).decode() if not isinstance(value, str) else value)
    assert info["columns"]["nee"]["unit"] == "g m-2"
    assert "carbon" in info["columns"]["nee"]["description"]
    assert info["site"]["name"] == fluxpart.demo.site().name
    assert info["interval_minutes"] == 30
    labels = duckdb.sql("SELECT DISTINCT nee_fill_quality FROM "
                        f"'{Path(folder) / 'timeseries.parquet'}'").fetchall()
    assert {row[0] for row in labels} <= {"measured", "A", "B", "C", "unfilled"}


def test_polars_sees_units_and_labels(written_demo):
    """Polars reads the same key-value metadata and the labels as strings."""
    polars = pytest.importorskip("polars")
    _, folder = written_demo
    path = Path(folder) / "timeseries.parquet"
    info = json.loads(polars.read_parquet_metadata(path)["fluxpart"])
    assert info["columns"]["gpp_nighttime"]["unit"] == "umol m-2 s-1"
    assert info["site"]["utc_offset"] == fluxpart.demo.site().utc_offset
    frame = polars.read_parquet(path, columns=["nee_fill_quality", "rejection_reason"])
    assert set(frame["nee_fill_quality"].cast(polars.String).unique()) <= \
        {"measured", "A", "B", "C", "unfilled"}


def test_load_puts_units_into_attrs(written_demo):
    """`fluxpart.load` gives DataFrames whose attrs carry units, descriptions and the site."""
    result, folder = written_demo
    loaded = fluxpart.load(folder)
    assert loaded.annual.attrs["units"]["nee"] == "g m-2"
    assert loaded.timeseries.attrs["units"]["nee_filled"] == "umol m-2 s-1"
    assert loaded.timeseries.attrs["site"]["latitude"] == result.site.latitude
    assert loaded.timeseries["nee_fill_quality"].dtype == "category"
    # the in-memory result carries the same attrs as the loaded one
    assert result.annual.attrs["units"]["nee"] == "g m-2"


def test_every_file_of_a_result_names_the_site(written_demo):
    """Issue 15: every Parquet file of a result folder carries the site and the interval."""
    result, folder = written_demo
    files = sorted(Path(folder).glob("*.parquet"))
    assert len(files) >= 8
    for path in files:
        info = json.loads(pq.ParquetFile(path).metadata.metadata[b"fluxpart"])
        assert info["site"]["name"] == result.site.name, path.name
        assert info["interval_minutes"] == 30, path.name
        assert info["columns"], path.name


def test_columns_take_the_arrow_types_and_values_of_from_pandas():
    """Issue 17: the column-by-column conversion gives the Arrow types and values that
    pyarrow's own pa.Table.from_pandas gives (pyarrow 26, the reference converter), for
    floats with NaN, integers, booleans, text, labels, stamps and nullable integers."""
    import pyarrow as pa

    from fluxpart.store import _to_arrow

    frame = _frame().assign(
        count=np.arange(4, dtype=np.int64), flag=[True, False, True, True],
        reason=pd.array(["ok", "", "ok", "gap"], dtype="str"),
        when=pd.date_range("2024-02-01", periods=4, freq="D"),
        optional=pd.array([1, None, 3, 4], dtype="Int64"))
    converted = _to_arrow(frame, _UNITS, "timeseries", None)
    reference = pa.Table.from_pandas(frame.reset_index(), preserve_index=False)
    assert converted.schema.names == reference.schema.names
    assert [f.type for f in converted.schema] == [f.type for f in reference.schema]
    assert converted.replace_schema_metadata(None).cast(
        reference.schema.remove_metadata()).equals(reference.replace_schema_metadata(None))


def test_a_file_system_without_permission_bits_still_takes_the_result(tmp_path, monkeypatch):
    """FAT and exFAT (a USB stick, an SD card) mounted without `quiet` answer chmod with
    EPERM where the mode differs from their fixed mask (Linux vfat/exfat mount options
    "quiet" (m)); some network shares ENOTSUP. The write then failed, "Operation not
    permitted", nothing written. The file keeps the file system's mode; any other chmod
    error (an I/O error) still fails the write, leaving no temporary file."""
    import errno
    import os

    from fluxpart import resultdir
    from fluxpart.store import atomic_write_bytes

    answer = {"errno": errno.EPERM}

    def no_mode_bits(path, mode, **kwargs):
        raise OSError(answer["errno"], os.strerror(answer["errno"]), str(path))

    monkeypatch.setattr(os, "chmod", no_mode_bits)
    atomic_write_bytes(tmp_path / "a.bin", b"kept")
    assert (tmp_path / "a.bin").read_bytes() == b"kept"
    staging = resultdir.make_staging(tmp_path / "out")
    assert staging.is_dir() and staging.name.startswith(".out.staging-")
    write_table(_frame(), tmp_path / "t.parquet", _UNITS, "timeseries")
    assert read_table(tmp_path / "t.parquet")["nee_filled"].iloc[0] == 1.5
    answer["errno"] = errno.EIO
    with pytest.raises(OSError, match="Input/output error"):
        atomic_write_bytes(tmp_path / "b.bin", b"lost")
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".b.bin")) == []


def test_plain_pandas_read_parquet_sees_the_units(written_demo):
    """`pandas.read_parquet` (pyarrow engine) restores `DataFrame.attrs` from the file
    metadata key ``PANDAS_ATTRS`` (pandas/io/parquet.py of the installed pandas; pandas
    2.1.0 release notes (m)). fluxpart kept the units only in the Arrow field metadata and
    its own key, which pandas drops: a modeller reading with plain pandas saw no unit.
    Now every table of a result read with plain pandas has the `attrs` that
    `fluxpart.load` gives, each unit equal to the Arrow field's (pyarrow) and, where not
    empty, a unit UDUNITS-2 knows (cf_units), and the same values (the stored index a
    first column, as pandas reads a file without its own index metadata)."""
    cf_units = pytest.importorskip("cf_units")
    _, folder = written_demo
    files = sorted(Path(folder).glob("*.parquet"))
    assert len(files) >= 8
    for path in files:
        plain = pd.read_parquet(path)
        ours = read_table(path)
        assert plain.attrs == ours.attrs, path.name
        assert plain.attrs["units"], path.name
        fields = {f.name: f.metadata[b"unit"].decode() for f in pq.read_schema(path)}
        assert plain.attrs["units"] == fields, path.name
        for column, unit in plain.attrs["units"].items():
            if unit:
                assert not cf_units.Unit(unit).is_unknown(), (path.name, column, unit)
        assert set(plain.attrs["descriptions"]) == set(plain.columns), path.name
        index = json.loads(pq.read_schema(path).metadata[b"fluxpart"])["index"]
        back = plain.set_index(index) if index is not None else plain
        pd.testing.assert_frame_equal(back, ours, check_freq=False)
    daily = pd.read_parquet(Path(folder) / "daily.parquet")
    assert daily.attrs["units"]["nee"] == "g m-2"
    assert "carbon" in daily.attrs["descriptions"]["nee"]
    assert daily.attrs["site"]["name"] == fluxpart.demo.site().name
    assert "local standard time" in daily.attrs["time_convention"]


def test_pandas_attrs_copy_follows_the_written_metadata(tmp_path):
    """The copy for pandas holds what was written: units of the given columns, the
    facts of the file metadata and no unit for a column not described; a second write of
    the same frame gives the same bytes (json with sorted keys)."""
    frame = _frame()
    path = _write(tmp_path, frame, metadata=file_metadata(_SITE, 60))
    attrs = pd.read_parquet(path).attrs
    assert attrs["units"] == {"time": "", "nee_filled": "umol m-2 s-1", "nee_fill_quality": ""}
    assert attrs["interval_minutes"] == 60 and attrs["site"]["utc_offset"] == 12.0
    assert attrs["table"] == "timeseries" and "index" not in attrs
    first = path.read_bytes()
    assert _write(tmp_path, frame, metadata=file_metadata(_SITE, 60)).read_bytes() == first
