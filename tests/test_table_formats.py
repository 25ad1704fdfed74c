"""Typed tables read as the text reader's input (round layouts46): Parquet (with each kind
of pandas index), Arrow (Feather), JSON Lines (plain and gzipped) and a JSON array.

Outside facts, each named beside its check: pyarrow and pandas (general-purpose reference
libraries) write the files and give the values stored in them; Python's ``struct`` gives
binary64 and binary32 bit patterns (IEEE 754-2019); the time zone ``Etc/GMT-1`` is UTC+1
(IANA tz database: POSIX-style signs, inverted (m)); 2021-06-01 00:30 at UTC+1 is
2021-05-31 23:30 UTC (ISO 8601 offsets). Everything else is invented known truth: the
records as written (``test_robustness_layouts35._records``, 1-10 June 2021 at an invented
site).
"""

import gzip
import json

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE

from fluxpart import table_formats
from fluxpart.errors import (
    DuplicateTimestampError,
    InputFileError,
    MissingColumnError,
    TimestampError,
)
from fluxpart.io import _plain_numbers, read_table

VALUES = ["co2", "sw", "t_air", "vpd", "us"]


def _read(path, time_column="stamp", time_format="%Y%m%d%H%M", **options):
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE,
                      time_column=time_column, time_format=time_format, time_marks="end",
                      **options)


def _typed(frame):
    """The records with float columns (parsed exactly by Python's ``float``)."""
    typed = pd.DataFrame({name: [float(cell) for cell in frame[name]] for name in VALUES})
    typed.insert(0, "stamp", pd.to_datetime(frame["stamp"], format="%Y%m%d%H%M"))
    return typed


@pytest.fixture(scope="module")
def text_reading(tmp_path_factory):
    """The records as a CSV file and its reading: the truth a typed file must give."""
    frame, _ = _records(96)
    path = tmp_path_factory.mktemp("csv") / "t.csv"
    path.write_text(frame.to_csv(index=False))
    return frame, _read(path)[0]


def _same(read, expected):
    pd.testing.assert_frame_equal(read, expected, check_exact=True)


def test_floats_reach_the_reader_bit_for_bit():
    """Random binary64 bit patterns (every finite one the reader takes as a value) and
    binary32 values, through the written text and the reader's number parsing: the same
    bits (the binary32 ones widened exactly, as numpy widens them)."""
    rng = np.random.default_rng(46)
    bits = rng.integers(0, 2**64, 30_000, dtype=np.uint64).view(np.float64)
    wide = bits[np.isfinite(bits) & (np.abs(bits) < 1e30)]
    wide = np.concatenate([wide, [0.1, -0.0, 5e-324, 2.2250738585072014e-308, 1e21]])
    narrow = rng.standard_normal(10_000).astype(np.float32)
    table = pa.table({"wide": wide, "narrow": np.resize(narrow, len(wide))})
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink)
    data = sink.getvalue().to_pybytes()
    text = table_formats.table_text(data, "t.parquet", table_formats.binary_kind(data))
    cells = pd.read_csv(pd.io.common.StringIO(text), dtype=str, keep_default_na=False)
    for name, stored in (("wide", wide), ("narrow", np.resize(narrow, len(wide)))):
        values, _ = _plain_numbers(cells[name], ".")
        assert values.view(np.uint64).tolist() == stored.astype(np.float64).view(
            np.uint64).tolist()
    # JSON numbers: Python's json parses them correctly rounded, repr writes them back
    records = "\n".join(json.dumps({"v": float(v)}) for v in wide[:10_000])
    cells = pd.read_csv(pd.io.common.StringIO(
        table_formats.table_text(records, "t.jsonl", "JSON Lines")), dtype=str,
        keep_default_na=False)
    assert _plain_numbers(cells["v"], ".")[0].view(np.uint64).tolist() == \
        wide[:10_000].view(np.uint64).tolist()


def test_unrounded_values_of_a_parquet_file_are_read_as_stored(tmp_path):
    """Values with all 17 digits (a script's computed fluxes) reach the frame unchanged."""
    frame, _ = _records(96)
    typed = _typed(frame)
    rng = np.random.default_rng(7)
    typed["co2"] = typed["co2"] + rng.standard_normal(len(typed)) / 3
    typed.set_index("stamp").to_parquet(tmp_path / "t.parquet")
    read = _read(tmp_path / "t.parquet")[0]
    assert read["nee"].to_numpy().view(np.uint64).tolist() == \
        typed["co2"].to_numpy().view(np.uint64).tolist()


@pytest.mark.parametrize("index", ["named", "unnamed", "range", "utc+1", "utc with %z"])
def test_parquet_with_each_kind_of_pandas_index(tmp_path, text_reading, index):
    """pandas' ``to_parquet`` of the records with the stamps as a named or unnamed
    DatetimeIndex (read as "index", the name ``reset_index`` gives it), as a column under a
    RangeIndex, and as an index with a time zone: Etc/GMT-1 is the site's UTC+1 (read as
    it is), UTC read by each stamp's own offset where time_format holds %z."""
    frame, expected = text_reading
    typed = _typed(frame)
    column, time_format = "stamp", "%Y%m%d%H%M"
    if index == "named":
        typed = typed.set_index("stamp")
    elif index == "unnamed":
        typed = typed.set_index("stamp").rename_axis(None)
        column = "index"
    elif index == "utc+1":
        typed["stamp"] = typed["stamp"].dt.tz_localize("Etc/GMT-1")
        typed = typed.set_index("stamp")
    elif index == "utc with %z":
        typed["stamp"] = typed["stamp"].dt.tz_localize("Etc/GMT-1").dt.tz_convert("UTC")
        typed = typed.set_index("stamp")
        time_format = "%Y-%m-%d %H:%M%z"
    typed.to_parquet(tmp_path / "t.parquet")
    read, report = _read(tmp_path / "t.parquet", column, time_format)
    _same(read, expected)
    assert report.records_read == len(frame)


def test_a_time_zone_other_than_the_sites_clock_is_refused_naming_both(tmp_path,
                                                                       text_reading):
    """UTC stamps at a UTC+1 site under a format without %z: two clocks for one stamp."""
    frame, _ = text_reading
    typed = _typed(frame)
    typed["stamp"] = typed["stamp"].dt.tz_localize("Etc/GMT-1").dt.tz_convert("UTC")
    typed.set_index("stamp").to_parquet(tmp_path / "t.parquet")
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "t.parquet")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "UTC+00:00 at record 1" in message and "[site] utc_offset = 1" in message
    assert "UTC+01:00" in message and "%z" in message
    indexed = _typed(frame).set_index("stamp")                  # no time zone, but %z
    indexed.to_parquet(tmp_path / "naive.parquet")
    with pytest.raises(TimestampError, match="without a time zone; take %z out"):
        _read(tmp_path / "naive.parquet", time_format="%Y-%m-%d %H:%M%z")


@pytest.mark.parametrize("kind", ["feather", "jsonl", "jsonl.gz", "ndjson", "json array"])
def test_feather_json_lines_and_a_json_array(tmp_path, text_reading, kind):
    """Arrow IPC (pandas' ``to_feather``), one JSON object a line (plain, gzipped) and a
    JSON array of objects: the CSV's reading, stamps as text under time_format."""
    frame, expected = text_reading
    typed = _typed(frame)
    if kind == "feather":
        typed.to_feather(tmp_path / "t.feather")
        path = tmp_path / "t.feather"
    else:
        typed["stamp"] = frame["stamp"]
        records = [json.dumps(record) for record in typed.to_dict("records")]
        text = ("[" + ",\n".join(records) + "]\n" if kind == "json array"
                else "\n".join(records) + "\n")
        path = tmp_path / f"t.{kind.replace(' array', '')}"
        path.write_bytes(gzip.compress(text.encode(), mtime=0) if kind.endswith("gz")
                         else text.encode())
    _same(_read(path)[0], expected)


def test_mixed_types_nulls_and_missing_keys(tmp_path, text_reading):
    """A dictionary (categorical) flag and value column, integers, a column of numbers as
    strings, nulls for no value (Parquet) and a key left out or null (JSON Lines): the
    nulls are missing, the rest as in the CSV."""
    frame, expected = text_reading
    typed = _typed(frame)
    typed["sw"] = typed["sw"].map(repr).astype("category")      # dictionary of strings
    typed["vpd"] = typed["vpd"].map(repr)                        # plain strings
    typed["flag"] = pd.array([0] * len(typed), dtype="Int64")   # an integer flag
    typed.loc[[3, 40], "co2"] = np.nan                          # nulls
    typed.loc[5, "flag"] = pd.NA
    typed.set_index("stamp").to_parquet(tmp_path / "t.parquet")
    want = expected.copy()
    want.iloc[[3, 40], want.columns.get_loc("nee")] = np.nan
    columns = MAPPING | {"nee_flag": "flag"}
    read = read_table(tmp_path / "t.parquet", columns=columns, units={"vpd": "kPa"},
                      site=SITE, time_column="stamp", time_format="%Y%m%d%H%M",
                      time_marks="end")[0]
    _same(read[want.columns], want)
    assert np.isnan(read["nee_flag"].iloc[5]) and (read["nee_flag"].drop(
        read.index[5]) == 0).all()
    records = []
    for i, (s, c, w, t, v, u) in enumerate(frame[["stamp", *VALUES]].itertuples(index=False)):
        record = {"stamp": s, "co2": None if i == 3 else float(c), "sw": str(w),
                  "t_air": float(t), "vpd": float(v), "us": float(u)}
        if i == 40:
            del record["co2"]                                   # a key left out
        records.append(json.dumps(record))
    (tmp_path / "t.jsonl").write_text("\n".join(records) + "\n")
    _same(_read(tmp_path / "t.jsonl")[0], want)


def test_wrong_mappings_and_faults_are_named_with_records(tmp_path, text_reading):
    """A mapped column the file lacks (the nearest name offered), a nested column mapped,
    a record that is no object, and a stamp missing at record 7 (named as a record, not
    as a line of the written text)."""
    frame, _ = text_reading
    typed = _typed(frame).set_index("stamp")
    typed.rename(columns={"t_air": "t_air_c"}).to_parquet(tmp_path / "t.parquet")
    with pytest.raises(MissingColumnError, match="t_air_c"):
        _read(tmp_path / "t.parquet")
    typed.rename_axis(None).to_parquet(tmp_path / "unnamed.parquet")
    with pytest.raises(MissingColumnError, match="unnamed pandas index is the column 'index'"):
        _read(tmp_path / "unnamed.parquet")
    nested = typed.assign(t_air=[[t, t] for t in typed["t_air"]])
    nested.to_parquet(tmp_path / "nested.parquet")
    with pytest.raises(InputFileError, match=r"column 't_air' holds list<.*not one number"):
        _read(tmp_path / "nested.parquet")
    (tmp_path / "t.jsonl").write_text('{"stamp": "202106010030"}\n{"stamp": "x"}\n[1, 2]\n')
    with pytest.raises(InputFileError, match=r"record 3 is list '\[1, 2\]', not an object"):
        _read(tmp_path / "t.jsonl")
    gap = typed.reset_index()
    gap.loc[6, "stamp"] = pd.NaT
    gap.to_parquet(tmp_path / "gap.parquet")
    with pytest.raises(TimestampError) as caught:
        _read(tmp_path / "gap.parquet")
    assert "record 7" in str(caught.value) and "line" not in str(caught.value)
    # files combined: a typed file's place is still a record, a text file's a line
    other = frame.iloc[48:].assign(co2=[f"{float(v) + 1:g}" for v in frame["co2"].iloc[48:]])
    (tmp_path / "b.csv").write_text(other.to_csv(index=False))
    typed.to_parquet(tmp_path / "a.parquet")
    with pytest.raises(DuplicateTimestampError, match=r"on record 49 of '[^']*a\.parquet' "
                       r"and on line 2 of '[^']*b\.csv'"):
        _read([tmp_path / "a.parquet", tmp_path / "b.csv"])


def test_row_groups_of_another_schema_are_refused():
    """A row group whose columns are not the schema's (Apache Parquet: each row group
    holds a chunk of every schema column): refused, naming the group. pyarrow writes no
    such file, so the metadata is stood in for."""
    class Column:
        def __init__(self, path, kind):
            self.path = self.path_in_schema = path
            self.physical_type = kind

    class Group:
        def __init__(self, columns):
            self.num_columns, self._columns = len(columns), columns

        def column(self, j):
            return self._columns[j]

    class Schema(list):
        def column(self, j):
            return self[j]

    class Meta:
        num_row_groups = 2

        def row_group(self, i):
            return Group([Column("a", "DOUBLE")] if i == 0 else [Column("a", "BYTE_ARRAY")])

    class File:
        metadata, schema = Meta(), Schema([Column("a", "DOUBLE")])

    with pytest.raises(InputFileError, match="row group 2 of 2 holds other columns"):
        table_formats._refuse_differing_row_groups(File(), "t.parquet")


def test_record_wording():
    assert table_formats.record_wording(
        "line 5; lines 3 to 7; data line 9, line 2 and 4; delete that line; the header line"
    ) == ("record 4; records 2 to 6; record 8, record 1 and 3; delete that record; the "
          "header line")


def test_csv_and_parquet_give_byte_identical_result_tables(bundle, tmp_path):
    """The session's bundle (30 days of the example, processed from tower.csv) again from
    a Parquet file of the same records, the stamps a DatetimeIndex: every table the same
    bytes (the pipeline is deterministic; its input is the same frame)."""
    import warnings

    from fluxpart import FluxpartWarning
    from fluxpart.pipeline import process_site_config

    raw = pd.read_csv(bundle / "tower.csv", dtype=str)
    typed = pd.DataFrame({name: [float(cell) for cell in raw[name]]
                          for name in raw.columns if name != "stamp_end"})
    typed["qc_co2"] = typed["qc_co2"].astype("int64")
    typed.index = pd.DatetimeIndex(pd.to_datetime(raw["stamp_end"], format="%Y%m%d%H%M"),
                                   name="stamp_end")
    typed.to_parquet(tmp_path / "tower.parquet")
    (tmp_path / "site.toml").write_text((bundle / "site.toml").read_text().replace(
        "tower.csv", "tower.parquet"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FluxpartWarning)      # the bundle's own warnings
        process_site_config(tmp_path / "site.toml").write(tmp_path / "out")
    tables = sorted(path.name for path in (bundle / "out").glob("*.parquet"))
    assert len(tables) > 10
    assert [name for name in tables if (bundle / "out" / name).read_bytes()
            != (tmp_path / "out" / name).read_bytes()] == []


def test_a_time_of_day_column_is_read_exactly_or_refused(tmp_path):
    """A date column and an Arrow time64 column (pyarrow, a general-purpose reference
    library, stores the values): a quarter second is written as stored and read by the
    reader's rule for stamps off the minute (rounded with a note, not dropped silently),
    and a nanosecond, which no reading keeps, is refused naming the column and record."""
    frame, _ = _records(96)
    typed = _typed(frame)
    stamps = typed.pop("stamp")
    for shift in ("250ms", "1ns"):
        shifted = stamps + pd.Timedelta(shift)
        clock = (shifted - shifted.dt.normalize()).to_numpy("timedelta64[ns]").astype(np.int64)
        table = pa.table({"day": pa.array(shifted.dt.date, pa.date32()),
                          "clock": pa.array(clock, pa.time64("ns")),
                          **{name: typed[name] for name in VALUES}})
        path = tmp_path / f"{shift}.parquet"
        pq.write_table(table, path)
        if shift == "250ms":
            text = table_formats.table_text(path.read_bytes(), path, "a Parquet file")
            assert text.splitlines()[1].split(",")[:2] == ["2021-06-01", "00:30:00.250000"]
            read, notes = _read(path, time_column=["day", "clock"],
                                time_format="%Y-%m-%d %H:%M")
            assert "96 stamp(s) within seconds of a whole minute rounded" in str(notes)
            assert read.index[0] == pd.Timestamp("2021-06-01 00:00")
        else:
            with pytest.raises(TimestampError, match=r"'clock' .* finer than a "
                               r"microsecond \(record 1: 00:30:00\.000000001\)"):
                _read(path, time_column=["day", "clock"], time_format="%Y-%m-%d %H:%M")


def test_a_timestamp_finer_than_a_microsecond_is_refused_naming_it(tmp_path):
    """An Arrow timestamp[ns] column (pyarrow, a general-purpose reference library, stores
    the values) with one stamp a nanosecond off the minute: no reading keeps it, so it is
    refused naming the column and the record (pyarrow's own "would lose data" error
    before, a traceback; round review68), and one a quarter second off is read."""
    frame, _ = _records(96)
    typed = _typed(frame)
    stamps = typed["stamp"].to_numpy("datetime64[ns]").astype(np.int64)
    for off, record in ((250_000_000, None), (1, 7)):
        shifted = stamps.copy()
        shifted[6] += off
        typed["stamp"] = pa.array(shifted, pa.timestamp("ns"))
        path = tmp_path / f"{off}.parquet"
        pq.write_table(pa.Table.from_pandas(typed, preserve_index=False), path)
        if record is None:
            assert _read(path)[0].index[6] == pd.Timestamp("2021-06-01 03:00")  # start
        else:
            with pytest.raises(TimestampError, match=r"'stamp' holds stamps finer than a "
                               r"microsecond \(record 7: 2021-06-01 03:30:00\.000000001\)"):
                _read(path)
