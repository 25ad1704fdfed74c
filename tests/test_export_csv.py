"""CSV export with W3C CSVW metadata, read back as R or a spreadsheet would (round modeller22).

Outside references: the Parquet files themselves read with pyarrow (values, field
metadata ``unit`` / ``description``), Python's ``csv`` module (an RFC 4180 reader),
``datetime.fromisoformat`` (an ISO 8601 parser), ``float`` (IEEE 754 text round trip),
cf_units (UDUNITS-2) and the W3C CSVW metadata vocabulary (2015): a table group's
``tables``, each ``url`` and ``tableSchema.columns`` whose ``name``s match the header.
"""

import csv
import errno
import hashlib
import io
import json
import os
import re
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np
import pyarrow.parquet as pq
import pytest

from fluxpart.cli import main
from fluxpart.export_csv import (
    CAUTIONED_COLUMNS,
    DESCRIPTION_PROPERTY,
    METADATA_NAME,
    UNIT_PROPERTY,
    offset_text,
    write_csv,
)
from fluxpart.manifest import TONNES_CAUTION

cf_units = pytest.importorskip("cf_units")


@pytest.fixture(scope="module")
def exported(written_demo, tmp_path_factory):
    """The shared demo result folder exported by the command line: (result folder, CSV folder)."""
    _, folder = written_demo
    target = tmp_path_factory.mktemp("csv") / "tables"
    assert main(["export", str(folder), "--csv", str(target)]) == 0
    return folder, target


def _metadata(target):
    return json.loads((target / METADATA_NAME).read_text(encoding="utf-8"))


def _rows(path):
    """Header and rows by Python's csv module (RFC 4180 reader), from UTF-8 bytes."""
    text = path.read_bytes().decode("utf-8")
    rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=",", quotechar="\""))
    return rows[0], rows[1:]


def _fact(metadata, name):
    for item in metadata["schema:additionalProperty"]:
        if item["schema:name"] == name:
            return item["schema:value"]
    raise KeyError(name)


def test_every_table_is_a_csv_described_in_one_csvw_file(exported):
    """CSVW (W3C 2015): a table group lists each table by ``url``; every column ``name``
    matches the header cell at its position ("compatible" metadata). Every Parquet table
    of the folder (its manifest's list) has its CSV, timeseries/daily/monthly/annual first."""
    folder, target = exported
    metadata = _metadata(target)
    assert metadata["@context"][0] == "http://www.w3.org/ns/csvw"
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    urls = [table["url"] for table in metadata["tables"]]
    assert urls[:4] == ["timeseries.csv", "daily.csv", "monthly.csv", "annual.csv"]
    assert sorted(urls) == sorted(f"{name}.csv" for name in manifest["tables"])
    assert sorted(p.name for p in target.iterdir()) == sorted([*urls, METADATA_NAME])
    for table in metadata["tables"]:
        header, rows = _rows(target / table["url"])
        names = [column["name"] for column in table["tableSchema"]["columns"]]
        assert header == names, table["url"]
        # a column name is a URI-template variable (CSVW 2015, RFC 6570 "varname"), not
        # starting with "_" (reserved)
        assert all(re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9_]*(\.[A-Za-z0-9_]+)*", n)
                   for n in names), names
        parquet = pq.read_table(folder / table["url"].replace(".csv", ".parquet"))
        assert header == parquet.column_names, table["url"]
        assert len(rows) == parquet.num_rows and all(len(r) == len(header) for r in rows)


def test_units_and_descriptions_are_the_parquet_fields_and_parse_as_udunits(exported):
    """Each column's unit (``schema:unitText``) and description (``dc:description``) are
    those of the Parquet field metadata (read with pyarrow), and every unit parses with
    UDUNITS-2 (cf_units 3.x ``Unit``)."""
    folder, target = exported
    checked = 0
    for table in _metadata(target)["tables"]:
        schema = pq.read_schema(folder / table["url"].replace(".csv", ".parquet"))
        for column in table["tableSchema"]["columns"]:
            meta = schema.field(column["name"]).metadata or {}
            unit = meta.get(b"unit", b"").decode()
            assert column.get(UNIT_PROPERTY, "") == unit, (table["url"], column["name"])
            parquet_text = meta.get(b"description", b"").decode()
            if column["name"] in CAUTIONED_COLUMNS:     # the tonnes' caution after it
                parquet_text = f"{parquet_text}. {TONNES_CAUTION}."
            assert column.get(DESCRIPTION_PROPERTY, "") == parquet_text
            if unit:
                assert not cf_units.Unit(unit).is_unknown(), (column["name"], unit)
                checked += 1
    assert checked > 200
    daily = next(t for t in _metadata(target)["tables"] if t["url"] == "daily.csv")
    nee = next(c for c in daily["tableSchema"]["columns"] if c["name"] == "nee")
    # grams of carbon per square metre: UDUNITS-2 converts g m-2 to 1e-3 kg m-2
    assert cf_units.Unit(nee[UNIT_PROPERTY]).convert(1.0, cf_units.Unit("kg m-2")) == \
        pytest.approx(1e-3)


def test_values_equal_the_parquet_tables(exported):
    """Known truth: every cell read back (``float`` of the text, ``true``/``false``, ISO 8601
    with its offset, empty = missing) equals the Parquet value read with pyarrow, floats bit
    for bit (Python's float repr is the shortest text that reads back to the same double)."""
    folder, target = exported
    metadata = _metadata(target)
    hours = _fact(metadata, "site_utc_offset")
    for table in metadata["tables"]:
        header, rows = _rows(target / table["url"])
        parquet = pq.read_table(folder / table["url"].replace(".csv", ".parquet"))
        for position, column in enumerate(table["tableSchema"]["columns"]):
            text = [row[position] for row in rows]
            values = parquet.column(column["name"]).to_pylist()
            datatype = column["datatype"]
            if datatype == "double":
                got = np.array([float(t) if t else np.nan for t in text])
                want = np.array([np.nan if v is None else v for v in values], dtype=float)
                assert np.array_equal(got, want, equal_nan=True), (table["url"], column["name"])
            elif datatype == "integer":
                assert [int(t) if t else None for t in text] == values
            elif datatype == "boolean":
                assert [{"true": True, "false": False, "": None}[t] for t in text] == values
            elif isinstance(datatype, dict) and datatype["base"] == "string":   # labels
                assert text == ["" if v is None else str(v) for v in values], column["name"]
            elif isinstance(datatype, dict):
                assert datatype["base"] == "datetime"
                for cell, value in zip(text, values, strict=True):
                    if value is None:
                        assert cell == ""
                        continue
                    stamp = datetime.fromisoformat(cell)
                    assert stamp.utcoffset() == timedelta(hours=hours)
                    # the same instant: local standard time = UTC + utc_offset
                    assert stamp.replace(tzinfo=None) == value
            else:
                assert text == ["" if v is None else str(v) for v in values], column["name"]


def test_site_facts_and_time_convention_are_stated(exported, written_demo):
    """The group carries the site (name, latitude, longitude, UTC offset) and the time
    convention (start of interval, local standard time); the first record's stamp, an
    ISO 8601 time with offset, is the first Parquet stamp at that offset."""
    result, _ = written_demo
    _, target = exported
    metadata = _metadata(target)
    assert _fact(metadata, "site_name") == result.site.name
    assert _fact(metadata, "site_latitude") == result.site.latitude
    assert _fact(metadata, "site_longitude") == result.site.longitude
    assert _fact(metadata, "site_utc_offset") == result.site.utc_offset
    assert _fact(metadata, "interval_minutes") == 30
    assert _fact(metadata, "time_stamp") == "start of interval"
    assert "local standard time" in _fact(metadata, "time_zone")
    assert "start of its averaging interval" in _fact(metadata, "time_convention")
    # every unit given with a fact parses too (UDUNITS-2: degrees_north, h, min)
    for item in metadata["schema:additionalProperty"]:
        if "schema:unitText" in item:
            assert not cf_units.Unit(item["schema:unitText"]).is_unknown()
    _, rows = _rows(target / "timeseries.csv")
    first = datetime.fromisoformat(rows[0][0])
    assert first.astimezone(timezone.utc).replace(tzinfo=None) == \
        result.timeseries.index[0].to_pydatetime() - timedelta(hours=result.site.utc_offset)
    assert rows[0][0].endswith(_fact(metadata, "utc_offset_iso8601"))


def test_the_respiration_choices_and_the_sign_convention_are_stated(exported):
    """Round modeller25: a reader of the CSV folder could not tell which temperature drove
    Reco (air or soil, chosen on the night data) nor the constant-Q10 form's weight, which
    only manifest.json recorded, and the sign convention was stated per column only. The
    group's facts now carry them, equal to manifest.json read with ``json``; their units
    parse with cf_units (UDUNITS-2)."""
    folder, target = exported
    metadata = _metadata(target)
    recorded = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))["provenance"]
    assert _fact(metadata, "respiration_temperature") == \
        recorded["respiration_driver"]["chosen"]
    assert _fact(metadata, "respiration_temperature_delay_hours") == \
        recorded["respiration_driver"]["delay_hours"]
    assert recorded["respiration_driver"]["reason"] in \
        _fact(metadata, "respiration_temperature_basis")
    assert _fact(metadata, "respiration_form_share_constant_q10") == \
        recorded["respiration_form"]["share_applied"]
    units = {item["schema:name"]: item.get("schema:unitText")
             for item in metadata["schema:additionalProperty"]}
    assert cf_units.Unit(units["respiration_temperature_delay_hours"]) == cf_units.Unit("hour")
    assert cf_units.Unit(units["respiration_form_share_constant_q10"]).is_dimensionless()
    assert "nee (every table): positive = release" in _fact(metadata, "sign_convention")

def test_utc_offsets_are_iso_8601():
    """ISO 8601-1:2019 (m): a UTC offset is written ±hh:mm; India +05:30, Nepal +05:45,
    Newfoundland standard time -03:30 (IANA time zone database, common knowledge)."""
    assert offset_text(1.0) == "+01:00"
    assert offset_text(0.0) == "+00:00"
    assert offset_text(5.5) == "+05:30"
    assert offset_text(5.75) == "+05:45"
    assert offset_text(-3.5) == "-03:30"
    assert offset_text(-10) == "-10:00"
    for hours in (1.0, 5.75, -3.5):
        parsed = datetime.fromisoformat(f"2021-01-01T00:00:00{offset_text(hours)}")
        assert parsed.utcoffset() == timedelta(hours=hours)


def test_two_exports_are_byte_identical(exported, tmp_path):
    """Same result, same bytes: a second export (through the library) matches the CLI's."""
    folder, target = exported
    again = write_csv(folder, tmp_path / "again")
    digests = {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in target.iterdir()}
    assert digests == {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
                       for p in again.iterdir()}


def test_export_leaves_the_parquet_tables_unchanged(exported):
    """The result folder still matches its manifest (every table's SHA-256) after export."""
    folder, _ = exported
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    for name, entry in manifest["tables"].items():
        digest = hashlib.sha256((folder / entry["file"]).read_bytes()).hexdigest()
        assert digest == entry["sha256"], name


def _one_error_line(capsys):
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    return lines[0]


def test_a_non_empty_target_is_refused_and_left_alone(written_demo, tmp_path, capsys):
    _, folder = written_demo
    target = tmp_path / "taken"
    target.mkdir()
    (target / "notes.txt").write_text("mine")
    assert main(["export", str(folder), "--csv", str(target)]) == 2
    assert "not empty" in _one_error_line(capsys)
    assert [p.name for p in target.iterdir()] == ["notes.txt"]
    file = tmp_path / "a_file"
    file.write_text("x")
    assert main(["export", str(folder), "--csv", str(file)]) == 2
    assert "not a folder" in _one_error_line(capsys)
    assert file.read_text() == "x"


def test_an_empty_target_folder_is_filled(written_demo, tmp_path, capsys):
    """An empty folder is filled; exported into again, it is refused as holding an earlier
    export (faults43: refused as any non-empty folder) and left as it was."""
    _, folder = written_demo
    target = tmp_path / "empty"
    target.mkdir()
    assert main(["export", str(folder), "--csv", str(target)]) == 0
    assert (target / METADATA_NAME).is_file() and (target / "annual.csv").is_file()
    before = {p.name: p.read_bytes() for p in target.iterdir()}
    capsys.readouterr()
    assert main(["export", str(folder), "--csv", str(target)]) == 2
    line = _one_error_line(capsys)
    assert "holds an earlier CSV export (its csv-metadata.json)" in line
    assert "delete that folder to export there again, or give a new one" in line
    assert {p.name: p.read_bytes() for p in target.iterdir()} == before


def test_a_target_inside_the_result_folder_is_refused(written_demo, capsys):
    _, folder = written_demo
    before = sorted(p.name for p in folder.iterdir())
    for inside in (folder / "csv", folder / "report" / "csv"):
        assert main(["export", str(folder), "--csv", str(inside)]) == 2
        assert "inside the result folder" in _one_error_line(capsys)
    assert sorted(p.name for p in folder.iterdir()) == before


def test_export_without_a_target_is_one_error_line(written_demo, capsys):
    _, folder = written_demo
    assert main(["export", str(folder)]) == 2
    assert "--csv" in _one_error_line(capsys)


def test_an_unwritable_place_is_one_error_line(written_demo, tmp_path, capsys, monkeypatch):
    """No permission to create the temporary folder (simulated: tests may run as root)."""
    import tempfile

    _, folder = written_demo

    def refuse(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(tempfile, "mkdtemp", refuse)
    target = tmp_path / "out"
    assert main(["export", str(folder), "--csv", str(target)]) == 2
    assert "cannot write" in _one_error_line(capsys)
    assert not target.exists()
    assert main(["export", str(folder), "--csv", str(tmp_path / "f" / "x")]) == 2
    capsys.readouterr()
    (tmp_path / "plain").write_text("x")
    assert main(["export", str(folder), "--csv", str(tmp_path / "plain" / "x")]) == 2
    assert "is a file" in _one_error_line(capsys)


@pytest.mark.parametrize("failure", ["disk_full", "interrupt"])
def test_a_failure_part_way_leaves_nothing(written_demo, tmp_path, capsys, monkeypatch, failure):
    """Atomicity: the fifth file's write fails (ENOSPC, or Ctrl-C): no target folder and
    no temporary folder is left; the CLI prints one error line and exits 2."""
    import builtins

    from fluxpart import export_csv

    _, folder = written_demo
    real_open = builtins.open
    calls = []

    def failing_open(path, mode="r", *args, **kwargs):
        if "w" in mode:
            calls.append(path)
            if len(calls) == 5:
                if failure == "disk_full":
                    raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
                raise KeyboardInterrupt
        return real_open(path, mode, *args, **kwargs)

    monkeypatch.setattr(export_csv, "open", failing_open, raising=False)
    target = tmp_path / "out"
    if failure == "disk_full":
        assert main(["export", str(folder), "--csv", str(target)]) == 2
        assert "writing failed" in _one_error_line(capsys)
    else:
        with pytest.raises(KeyboardInterrupt):
            write_csv(folder, target)
    assert len(calls) == 5
    assert list(tmp_path.iterdir()) == []


def test_a_killed_exports_temporary_folder_is_swept(written_demo, tmp_path):
    """A temporary folder a killed export left beside the target (older than this export)
    is removed; another hidden folder is not."""
    _, folder = written_demo
    left = tmp_path / ".out.abcd1234.tmp"
    left.mkdir()
    (left / "timeseries.csv").write_text("half")
    other = tmp_path / ".keep.abcd1234.tmp"
    other.mkdir()
    hour_ago = left.stat().st_mtime - 3600
    for path in (left, other):
        os.utime(path, (hour_ago, hour_ago))
    write_csv(folder, tmp_path / "out")
    assert sorted(p.name for p in tmp_path.iterdir()) == [other.name, "out"]


def test_missing_values_are_empty_and_labels_plain(exported, written_demo):
    """NaN is an empty field (common practice; R's read.csv reads "" as NA in a numeric
    column): the demo's nee (measured NEE, gaps included) has as many empty cells as NaN."""
    result, _ = written_demo
    _, target = exported
    header, rows = _rows(target / "timeseries.csv")
    position = header.index("nee")
    empty = sum(1 for row in rows if row[position] == "")
    assert empty == int(result.timeseries["nee"].isna().sum()) > 0
    quality = header.index("nee_fill_quality")
    assert {row[quality] for row in rows} <= {"measured", "A", "B", "C", "interpolated",
                                               "unfilled"}
    # '.' decimal mark and no thousands separator: every number matches the XML Schema
    # double lexical form (W3C XML Schema 1.1 Part 2, 3.3.5 double)
    double = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$|^-?INF$|^$")
    assert all(double.match(row[header.index("nee_filled")]) for row in rows)


def test_the_csv_writer_knows_no_orchestrator():
    """Writers know no orchestrator and no method (DEVELOPERS rules of the house)."""
    import ast
    import subprocess
    import sys

    import fluxpart

    tree = ast.parse((Path(fluxpart.__file__).parent / "export_csv.py").read_text("utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.level == 1:
            # respiration_facts reads the provenance's records; it imports no method;
            # manifest (no pipeline import) shows the path written (faults37)
            assert (node.module or "") in ("errors", "schema", "store", "export", "result",
                                           "resultdir", "respiration_facts", "manifest",
                                           ""), node.module
    code = ("import sys, fluxpart.export_csv; "
            "print(sorted(m for m in sys.modules if m.startswith('fluxpart.')))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, check=True)
    loaded = set(eval(done.stdout))
    assert not loaded & {"fluxpart.pipeline", "fluxpart.gapfill", "fluxpart.partition"}, loaded


def test_a_result_in_memory_exports_the_same_bytes_as_its_folder(written_demo, exported):
    """Same result, same bytes by either route: the Result that ``process`` returned and
    the folder it wrote give identical files (the index named and the units as the folder
    stores them, e.g. ``row`` of the u* table and the units of the ``parameters`` class),
    but for the folder's ``result_*`` facts in csv-metadata.json (auditor53: which result,
    input bytes and seed; a Result in memory has no manifest), each as the folder's
    manifest.json records it (read with json here)."""
    from fluxpart.export_csv import csv_tables

    result, folder = written_demo
    _, target = exported
    files = csv_tables(result)
    assert sorted(files) == sorted(p.name for p in target.iterdir())
    for name, data in files.items():
        if name != "csv-metadata.json":
            assert data == (target / name).read_bytes(), name
    written = json.loads((target / "csv-metadata.json").read_text(encoding="utf-8"))
    facts = written["schema:additionalProperty"]
    links = {f["schema:name"]: f["schema:value"] for f in facts
             if f["schema:name"].startswith("result_")}
    manifest = json.loads((Path(folder) / "manifest.json").read_text(encoding="utf-8"))
    assert links == {"result_manifest_seal": manifest["seal"], "result_seed": manifest["seed"],
                     "result_code_sha256": manifest["code"]["sha256"]}   # a demo: no input
    written["schema:additionalProperty"] = [f for f in facts
                                            if not f["schema:name"].startswith("result_")]
    assert written == json.loads(files["csv-metadata.json"])


def test_missing_infinite_and_quoted_cells_read_back():
    """Known truth on an invented table: NaN, NaT and a missing label are empty fields;
    infinities are XML Schema's ``INF``/``-INF`` (W3C XML Schema 1.1 Part 2, 3.3.5 double,
    the lexical space CSVW's ``double`` uses); a label holding a comma or a quote is quoted
    with doubled quotes and reads back whole (RFC 4180 section 2, rules 6 and 7)."""
    import pandas as pd

    from fluxpart.export_csv import _table_csv

    frame = pd.DataFrame({"value": [1.0, np.nan, np.inf, -np.inf],
                          "stamp": pd.to_datetime(["2021-01-01 00:30", None, None, None]),
                          "note": ["a,b", None, 'say "hi"', ""],
                          "ok": [True, False, True, False]},
                         index=pd.Index([0, 1, 2, 3], name="row"))
    data, names, types = _table_csv(frame, "-03:30")
    assert names == ["row", "value", "stamp", "note", "ok"]
    assert types[1] == "double" and types[4] == "boolean"
    rows = list(csv.reader(io.StringIO(data.decode("utf-8"), newline="")))
    assert rows[1] == ["0", "1.0", "2021-01-01T00:30:00-03:30", "a,b", "true"]
    assert rows[2] == ["1", "", "", "", "false"]
    assert rows[3][1:4] == ["INF", "", 'say "hi"'] and rows[4][1] == "-INF"
    assert float(rows[3][1]) == np.inf and float(rows[4][1]) == -np.inf   # Python reads INF


def test_a_labelled_column_admits_its_labels_and_nothing_else(exported):
    """CSVW (W3C 2015, Metadata Vocabulary 5.11.2 (m)): a string datatype's ``format`` is a
    regular expression its values must match. Each dictionary-encoded (labelled) Parquet
    column, read with pyarrow, has a pattern of exactly its dictionary's labels: every
    cell of the CSV matches (an empty cell is a missing value, the default ``null``), a
    label of another column or a changed case does not (round modeller26)."""
    folder, target = exported
    metadata = _metadata(target)
    checked = 0
    for table in metadata["tables"]:
        parquet = pq.read_table(folder / table["url"].replace(".csv", ".parquet"))
        header, rows = _rows(target / table["url"])
        for position, column in enumerate(table["tableSchema"]["columns"]):
            field = parquet.schema.field(column["name"])
            if not str(field.type).startswith("dictionary"):
                continue
            labels = parquet.column(column["name"]).combine_chunks().dictionary.to_pylist()
            pattern = re.compile(column["datatype"]["format"])
            assert column["datatype"]["base"] == "string"
            assert all(pattern.search(row[position]) for row in rows if row[position])
            assert all(pattern.search(label) for label in labels)
            for other in ("filled", "Measured", "measured ", "A|B", ""):
                assert other in labels or not pattern.search(other), (column["name"], other)
            checked += 1
    assert checked >= 6     # rejection_reason, nee_fill_method and the fill qualities
