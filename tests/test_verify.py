"""The auditor's rerun: `fluxpart verify` recomputes a result folder and locates differences."""

import json
import shutil
from pathlib import Path

import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from fluxpart import demo
from fluxpart.cli import main
from fluxpart.config import Config
from fluxpart.errors import InputFileError
from fluxpart.pipeline import process, process_site_config
from fluxpart.store import read_table
from fluxpart.verify import verify

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture(scope="module")
def demo_folder(tmp_path_factory):
    """A demo result folder as `fluxpart demo` writes it (few u* bootstrap draws, for speed)."""
    frame, _ = demo.site_year(seed=0)
    result = process(frame, demo.site(), Config(ustar_bootstrap_draws=10),
                     provenance={"demo": {"seed": 0, "variant": "c3"}})
    return result.write(tmp_path_factory.mktemp("verify") / "demo")


def _copy(folder, tmp_path) -> Path:
    target = tmp_path / "copy"
    shutil.copytree(folder, target)
    return target


def _edit_manifest(folder, change):
    path = folder / "manifest.json"
    manifest = json.loads(path.read_text(encoding="utf-8"))
    change(manifest)
    path.write_text(json.dumps(manifest, indent=2), encoding="utf-8")


def test_untouched_output_is_identical(demo_folder, capsys):
    """`fluxpart verify DIR` on an untouched folder prints 'identical' and exits 0."""
    assert main(["verify", str(demo_folder)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("identical")
    assert "not a certified credit" in out           # the caution of the manifest


def test_altered_parquet_value_is_located(demo_folder, tmp_path, capsys):
    """One hand-altered value: a hash mismatch and its table, column, row and both values."""
    folder = _copy(demo_folder, tmp_path)
    path = folder / "annual.parquet"
    table = pq.read_table(path)
    position = table.schema.get_field_index("nee")
    original = table.column("nee").to_pylist()
    changed = [original[0] + 1.0, *original[1:]]
    table = table.set_column(position, table.schema.field(position),
                             pa.array(changed, type=pa.float64()))
    pq.write_table(table, path)
    assert read_table(path).loc[2021, "nee"] == changed[0]

    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT identical")
    assert "annual: file SHA-256" in out and "recorded in manifest.json" in out
    assert (f"annual: column 'nee' at year=2021: stored {changed[0]!r}, recomputed "
            f"{original[0]!r}") in out
    assert "timeseries" not in out                   # the other tables still match


def test_edited_manifest_config_is_detected(demo_folder, tmp_path):
    """An edited setting changes the rerun; an edited table hash and versions are reported."""
    folder = _copy(demo_folder, tmp_path)

    def change(manifest):
        manifest["config"]["rg_tolerance"] = 40.0
        manifest["tables"]["ustar"]["sha256"] = "0" * 64
        manifest["versions"]["numpy"] = "0.0.1"

    _edit_manifest(folder, change)
    report = verify(folder)
    assert not report.identical
    kinds = {(d.table, d.kind) for d in report.differences}
    assert ("ustar", "hash") in kinds
    assert ("timeseries", "value") in kinds and ("annual", "value") in kinds
    filled = next(d for d in report.differences
                  if d.table == "timeseries" and d.column == "nee_filled")
    assert filled.row.startswith("time=2021-") and filled.stored != filled.recomputed
    assert any(w.startswith("numpy ") and "written with 0.0.1" in w
               for w in report.version_warnings)


@pytest.fixture
def run_folder(tmp_path):
    """`fluxpart run` on a copy of the example site (u* bootstrap off for speed)."""
    for name in ("quillmoor_grassland.toml", "quillmoor_grassland.csv"):
        shutil.copy(EXAMPLES / name, tmp_path / name)
    config_path = tmp_path / "quillmoor_grassland.toml"
    result = process_site_config(config_path, Config(seed=0, ustar_bootstrap_draws=0))
    return result.write(tmp_path / "out"), tmp_path / "quillmoor_grassland.csv"


def test_run_is_identical_then_a_changed_input_fails(run_folder, capsys):
    """A run reproduces; after one changed byte of the input, verify names both hashes."""
    folder, csv = run_folder
    assert verify(folder).identical
    recorded = json.loads((folder / "manifest.json").read_text())["provenance"]["input"]["sha256"]
    lines = csv.read_text().splitlines(keepends=True)
    fields = lines[1].rstrip("\n").split(",")
    fields[1] = f"{float(fields[1]) + 1.0:.3f}"        # the first NEE value, +1 µmol m-2 s-1
    lines[1] = ",".join(fields) + "\n"
    csv.write_text("".join(lines))
    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert "input file" in out and recorded in out


def test_moved_input_is_a_clear_error_or_found_with_option(run_folder, tmp_path, capsys):
    """A missing input exits 2 naming the file; `--input` points to where it moved."""
    folder, csv = run_folder
    moved = tmp_path / "archive" / csv.name
    moved.parent.mkdir()
    csv.rename(moved)
    assert main(["verify", str(folder)]) == 2
    err = capsys.readouterr().err
    assert csv.name in err and "--input" in err and "Traceback" not in err
    with pytest.raises(InputFileError, match="does not exist"):
        verify(folder)
    assert main(["verify", str(folder), "--input", str(moved)]) == 0


def test_folder_without_manifest_is_a_clear_error(tmp_path, capsys):
    """A folder that is not a result exits 2 with one error line."""
    assert main(["verify", str(tmp_path)]) == 2
    assert "manifest.json" in capsys.readouterr().err
