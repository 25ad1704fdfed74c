"""Probe: typed tables a tower database or a script writes (round layouts46).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts46.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts45.py``.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as pandas, pyarrow or a database export writes it: Parquet with the stamps
as a named or unnamed DatetimeIndex (naive, at the site's UTC+1, in UTC, in civil time), as a
timestamp, text or integer column under a RangeIndex, as a date and a time-of-day column;
Parquet of many row groups, of nulls for no value, of mixed types (a dictionary column,
numbers as text, an integer flag); Feather; JSON Lines plain, gzipped, as ``.ndjson``, with
keys left out; a JSON array; and wrong mappings (a name the file lacks, a nested column
mapped, UTC stamps at a UTC+1 site without ``%z``). Its truth is the example's frame, or
``"refused"`` where no reading is right without the user's word (one ``error:`` line is due).
One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts each
class. With the command line, each read case's ``run`` must give the example's tables.
"""
import gzip
import json
import os
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts46-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
from probe_layouts38 import table, toml  # noqa: E402
from probe_layouts45 import VALUE_COLUMNS, numbers  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def typed(raw, ends, nulls=False):
    """The example's values as float64 (the flag as int64), stamps a timestamp column."""
    frame = numbers(raw).astype(float)
    frame["co2_grade"] = frame["co2_grade"].astype("int64")
    if nulls:
        frame[VALUE_COLUMNS] = frame[VALUE_COLUMNS].where(frame[VALUE_COLUMNS] != -9999)
    frame.insert(0, "stamp", ends.to_numpy())
    return frame


def indexed(frame, name="stamp"):
    return frame.set_index("stamp").rename_axis(name)


# --------------------------------------------------------------------------- Parquet
@case
def parquet_named_naive_index(folder):
    indexed(typed(*table())).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_unnamed_naive_index(folder):
    """Named "index" in the config, as ``reset_index`` names it."""
    indexed(typed(*table()), None).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet", time_column="index")


@case
def parquet_unnamed_index_mapped_as_stamp(folder):
    indexed(typed(*table()), None).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    return "refused"          # no column 'stamp': the refusal names 'index'


@case
def parquet_index_at_the_sites_utc_plus_1(folder):
    frame = typed(*table())
    frame["stamp"] = frame["stamp"].dt.tz_localize("Etc/GMT-1")
    indexed(frame).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_index_in_utc_without_z(folder):
    frame = typed(*table())
    frame["stamp"] = frame["stamp"].dt.tz_localize("Etc/GMT-1").dt.tz_convert("UTC")
    indexed(frame).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    return "refused"          # UTC stamps, config UTC+1 without %z: two clocks


@case
def parquet_index_in_utc_with_z(folder):
    frame = typed(*table())
    frame["stamp"] = frame["stamp"].dt.tz_localize("Etc/GMT-1").dt.tz_convert("UTC")
    indexed(frame).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet", time_format="%Y-%m-%dT%H:%M%z")


@case
def parquet_index_in_civil_time_with_time_zone(folder):
    frame = typed(*table())
    frame["stamp"] = frame["stamp"].dt.tz_localize("Etc/GMT-1").dt.tz_convert(
        "Europe/Berlin")
    indexed(frame).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet", time_zone="Europe/Berlin")


@case
def parquet_stamp_column_under_a_range_index(folder):
    typed(*table()).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_stamp_as_text_column(folder):
    raw, ends = table()
    frame = typed(raw, ends)
    frame["stamp"] = raw["stamp"]
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_stamp_as_integer_column(folder):
    raw, ends = table()
    frame = typed(raw, ends)
    frame["stamp"] = raw["stamp"].astype("int64")
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_date_and_time_of_day_columns(folder):
    frame = typed(*table())
    frame.insert(0, "day", frame.pop("stamp"))
    frame.insert(1, "clock", frame["day"].dt.time)
    frame["day"] = frame["day"].dt.date
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet", time_column=["day", "clock"])
    # midnight of the next day is 00:00 of that date: the same stamps


@case
def parquet_many_row_groups(folder):
    indexed(typed(*table())).to_parquet(folder / "t.parquet", row_group_size=1000)
    toml(folder, "t.parquet")


@case
def parquet_nulls_for_no_value(folder):
    indexed(typed(*table(), nulls=True)).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_mixed_types(folder):
    """A dictionary (categorical) column, numbers as text, a nullable integer flag."""
    frame = typed(*table())
    frame["sun_in"] = frame["sun_in"].map(repr).astype("category")
    frame["air_c"] = frame["air_c"].map(repr)
    frame["co2_grade"] = frame["co2_grade"].astype("Int64")
    indexed(frame).to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


@case
def parquet_mapped_name_the_file_lacks(folder):
    indexed(typed(*table())).rename(columns={"air_c": "air_temp"}).to_parquet(
        folder / "t.parquet")
    toml(folder, "t.parquet")
    return "refused"


@case
def parquet_nested_column_mapped(folder):
    frame = indexed(typed(*table()))
    frame["air_c"] = [[v, v] for v in frame["air_c"]]
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    return "refused"


@case
def parquet_nested_column_not_mapped(folder):
    frame = indexed(typed(*table()))
    frame["notes"] = [{"a": 1}] * len(frame)
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")


# --------------------------------------------------------------------------- Feather, JSON
@case
def feather_stamp_column(folder):
    typed(*table()).to_feather(folder / "t.feather")
    toml(folder, "t.feather")


def json_lines(raw, ends, drop_missing=False):
    out = []
    for record in typed(raw, ends).assign(stamp=raw["stamp"]).to_dict("records"):
        if drop_missing:
            record = {k: v for k, v in record.items() if v != -9999}
        out.append(json.dumps(record))
    return "\n".join(out) + "\n"


@case
def json_lines_plain(folder):
    (folder / "t.jsonl").write_text(json_lines(*table()))
    toml(folder, "t.jsonl")


@case
def json_lines_gzipped_ndjson(folder):
    (folder / "t.ndjson.gz").write_bytes(gzip.compress(json_lines(*table()).encode(), mtime=0))
    toml(folder, "t.ndjson.gz")


@case
def json_lines_keys_left_out_for_no_value(folder):
    (folder / "t.jsonl").write_text(json_lines(*table(), drop_missing=True))
    toml(folder, "t.jsonl")


@case
def json_array_of_records(folder):
    text = json_lines(*table()).strip().replace("\n", ",\n")
    (folder / "t.json").write_text("[" + text + "]\n")
    toml(folder, "t.json")


def main():
    # judged as probe_layouts43.py judges its cases (probe_layouts39.judge)
    p43.CASES.update(CASES)
    p38.probe(CASES, p43.judge, "cases", 48)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    np.seterr(all="ignore")
    main()
