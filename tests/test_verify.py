"""The auditor's rerun: `fluxpart verify` recomputes a result folder and locates differences.

External facts checked here: IEEE 754 double precision (``numpy.nextafter`` gives the
adjacent representable value, a "last-bit" change, relative size about 1.1e-16 to
2.2e-16); SHA-256 from Python's ``hashlib``. Everything else is a fact of the audit
contract (DESIGN.md §4.1): exit 0 bit-identical or within rounding, 1 otherwise, 2 on error.
"""

import dataclasses
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from bundles import SHORT_RECORDS, make_bundle
from conftest import _run_here

from fluxpart import __version__, demo, schema
from fluxpart.cli import main
from fluxpart.config import Config
from fluxpart.errors import InputFileError
from fluxpart.manifest import manifest_seal
from fluxpart.pipeline import process, process_site_config
from fluxpart.store import file_sha256, read_table
from fluxpart.verify import (
    ROUNDING_TOLERANCE,
    compare_tables,
    remove_dead_scratch,
    respelled_inputs,
    verify,
)


def _edit_manifest(folder, change, reseal=False):
    path = folder / "manifest.json"
    manifest = json.loads(path.read_text(encoding="utf-8"))
    change(manifest)
    if reseal:
        manifest["seal"] = manifest_seal(manifest)
    path.write_text(json.dumps(manifest, indent=2), encoding="utf-8")


def _set_value(folder, table, column, change, reseal=True):
    """Change the first value of a column; with `reseal`, update hash and seal as a writer would."""
    path = folder / f"{table}.parquet"
    arrow = pq.read_table(path)
    position = arrow.schema.get_field_index(column)
    values = arrow.column(column).to_pylist()
    values[0] = change(values[0])
    arrow = arrow.set_column(position, arrow.schema.field(position),
                             pa.array(values, type=pa.float64()))
    pq.write_table(arrow, path)
    if reseal:
        _edit_manifest(folder, lambda m: m["tables"][table].update(sha256=file_sha256(path)),
                       reseal=True)
    return values[0]


def _remember_reruns(monkeypatch, kept: dict) -> dict:
    """Make verify's rerun (``fluxpart.pipeline.process_site_config``, which
    ``verify_rerun._recompute`` looks up when it runs) compute each distinct rerun once and
    give it again from `kept` (the computed ``Result``, which verify only reads: it writes
    a replaced copy to its scratch folder and compares that).

    Distinct means anything the pipeline reads differs: the key is the site config's path
    and bytes, the settings (``repr`` of the ``Config``), the input path(s) given and their
    bytes, the bytes of every file beside the site config (where its ``[input] path``
    points) and the working folder. The pipeline is deterministic (the audit contract,
    DESIGN.md §4.1: same input, config and seed give byte-identical tables, which the
    bit-identical tests here check with a computed rerun), so a kept rerun is what the
    same call computes again. Verify's own steps (the folder's check against its
    manifest, the input's SHA-256, writing the rerun and comparing every table and
    field) still run in full each time. Returns `kept`."""
    import hashlib

    import fluxpart.pipeline as pipeline

    computed = pipeline.process_site_config

    def digest(path) -> str:
        path = Path(path)
        return hashlib.sha256(path.read_bytes()).hexdigest() if path.is_file() else "-"

    def remembered(site_config, config=None, *args, input_path=None, **kwargs):
        given = [] if input_path is None else (
            [input_path] if isinstance(input_path, (str, os.PathLike)) else list(input_path))
        beside = sorted(item for item in Path(site_config).parent.iterdir() if item.is_file())
        key = (str(site_config), digest(site_config), repr(config), repr(args),
               repr(sorted(kwargs.items())), tuple((str(p), digest(p)) for p in given),
               tuple((item.name, digest(item)) for item in beside), os.getcwd())
        if key not in kept:
            kept[key] = computed(site_config, config, *args, input_path=input_path, **kwargs)
        return kept[key]

    monkeypatch.setattr(pipeline, "process_site_config", remembered)
    return kept


@pytest.fixture
def rerun_kept_in_test(monkeypatch):
    """Within one test, a rerun of the same input and settings computed once (the first
    verify of the test's folder reruns; a later verify of the same input and settings,
    after the test changed only the stored result, compares with that rerun): the
    recomputation does not read the stored tables, so it is the same (see
    :func:`_remember_reruns`). Returns the kept reruns (a dict)."""
    return _remember_reruns(monkeypatch, {})


@pytest.fixture(scope="module")
def _reruns_at_one_place():
    """The reruns of :func:`folder_check_copy`'s folder, kept for the module."""
    return {}


@pytest.fixture(scope="module")
def _one_place(tmp_path_factory):
    """One folder of the module where :func:`folder_check_copy` puts its copy each time."""
    return tmp_path_factory.mktemp("one_place") / "bundle"


@pytest.fixture
def folder_check_copy(bundle, _one_place, _reruns_at_one_place, monkeypatch):
    """A fresh copy of the module's genuine `bundle`, always at one place, whose rerun is
    computed once for the module (:func:`_remember_reruns`).

    For the tests whose check the rerun does not decide: what they check is found by the
    folder's own check against its manifest (its seal, every table's SHA-256, a file
    missing or not listed, a file's bytes through a link), by what verify finds beside or
    inside the folder (a staging folder, a report, the input put inside), or by the
    recorded environment; each tampers only the stored result, never the input or the
    site config the rerun reads, so the rerun of every such copy is the genuine bundle's,
    computed for real by the first of them. The same place keeps the recorded paths (and
    so the rerun's provenance) the same. A test of a difference only the rerun can find
    uses `copy` and reruns."""
    if _one_place.exists():
        shutil.rmtree(_one_place)
    shutil.copytree(bundle, _one_place)
    _remember_reruns(monkeypatch, _reruns_at_one_place)
    return _run_here(_one_place)


@pytest.fixture
def reports_of_verify(monkeypatch):
    """The reports ``fluxpart verify`` made in this test (``fluxpart.verify.verify``, which
    ``command_verify`` calls, wrapped to keep each report it returns): a test that checks
    both the printed verdict and the report's fields reads them from one CLI run."""
    import fluxpart.verify as module

    made, real = [], module.verify

    def kept(*args, **kwargs):
        made.append(real(*args, **kwargs))
        return made[-1]

    monkeypatch.setattr(module, "verify", kept)
    return made


@pytest.fixture(scope="module")
def _reruns_of_bundle():
    """The reruns of the module's untouched `bundle` (:func:`_remember_reruns`)."""
    return {}


@pytest.fixture(scope="module")
def genuine_verdicts(bundle, _reruns_of_bundle):
    """``fluxpart verify DIR`` and ``fluxpart verify DIR --quiet`` of the module's
    untouched bundle, each a real CLI run: {argv suffix: (exit code, stdout)}. Shared by
    the tests that read the verdict of the genuine result (each reran it before); the
    first computes the rerun, the second compares with it (the same genuine folder)."""
    import contextlib
    import io

    verdicts = {}
    with pytest.MonkeyPatch.context() as patch:
        _remember_reruns(patch, _reruns_of_bundle)
        for extra in ((), ("--quiet",)):
            printed = io.StringIO()
            with contextlib.redirect_stdout(printed):
                status = main(["verify", str(bundle / "out"), *extra])
            verdicts[extra] = status, printed.getvalue()
    assert len(_reruns_of_bundle) == 1
    return verdicts


def test_untouched_result_is_bit_identical(genuine_verdicts):
    """`fluxpart verify DIR` on an untouched folder says 'bit-identical' and exits 0."""
    status, out = genuine_verdicts[()]
    assert status == 0
    assert out.startswith("bit-identical")
    assert "not a certified credit" in out           # the caution of the manifest


def test_quiet_verify_prints_only_the_verdict_with_the_same_exit(genuine_verdicts, capsys):
    """`fluxpart verify DIR --quiet` prints the verdict, which result it is and the caution
    only, same exit."""
    status, out = genuine_verdicts[("--quiet",)]
    assert status == 0
    assert out.startswith("bit-identical") and out.count("\n") == 3
    assert out.splitlines()[1].startswith("result: seed 0; input tower.csv (sha256 ")
    assert out.splitlines()[2].startswith("Caution:") and "not a certified credit" in out
    # the option's help and README's command block name all three lines it prints (they
    # said "only the verdict and the caution" before review25)
    import re

    with pytest.raises(SystemExit) as stop:                 # argparse's --help
        main(["verify", "--help"])
    assert stop.value.code == 0
    shown = capsys.readouterr().out
    help_text = " ".join(shown[shown.index("--quiet "):].split())
    assert "verdict" in help_text and "result: line" in help_text and "caution" in help_text
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    entry = " ".join(re.sub(r"#", " ", readme[readme.index("fluxpart verify DIR"):
                                              readme.index("fluxpart diff   DIR_A")]).split())
    assert "--quiet: verdict" in entry and "result: line and caution only" in entry


def test_verify_names_which_result_the_folder_holds(bundle, genuine_verdicts):
    """After an interrupted run a folder holds the earlier or the new result, never a mix;
    verify names which from the manifest: seed, input and config with their SHA-256, and
    the release (review, 0.12.0). The SHA-256 prefixes equal hashlib's of the files."""
    import hashlib

    status, out = genuine_verdicts[()]
    assert status == 0
    line = next(x for x in out.splitlines() if x.startswith("result: "))
    digest = hashlib.sha256((bundle / "tower.csv").read_bytes()).hexdigest()
    assert f"input tower.csv (sha256 {digest[:12]}...)" in line
    assert line.startswith("result: seed 0;") and "written by fluxpart " in line


def test_moved_bundle_verifies_without_options(folder_check_copy):
    """Result, input and config moved together: found through the recorded relative paths.

    (The copy is at another place than the module's bundle it was copied from; finding
    the input decides, before the rerun: see `folder_check_copy`.)"""
    moved = folder_check_copy           # a copy of the bundle put elsewhere
    manifest = json.loads((moved / "out" / "manifest.json").read_text())
    assert manifest["provenance"]["input"]["path"] == "../tower.csv"
    assert not Path(manifest["provenance"]["site_config"]["path"]).is_absolute()
    report = verify(moved / "out")
    assert report.identical and report.exit_code == 0


def test_result_moved_alone_needs_input_and_uses_the_recorded_config(copy, tmp_path, capsys):
    """Only the result travelled: exit 2 naming --input; with --input, or a config pointing
    at the moved input, exit 0; a config with another setting is another config, exit 1."""
    alone = tmp_path / "received" / "out"
    shutil.copytree(copy / "out", alone)
    inbox = tmp_path / "inbox"
    inbox.mkdir()
    shutil.move(copy / "tower.csv", inbox / "renamed.csv")    # not where the run read it
    shutil.copy(copy / "site.toml", inbox / "renamed.toml")
    assert main(["verify", str(alone)]) == 2
    err = capsys.readouterr().err.splitlines()
    # the one line also says the folder passed its own check, which needs no input (review58)
    assert len(err) == 1 and "--input" in err[0]
    assert err[0].endswith("(the folder itself matches its manifest: seal and every table's "
                           "SHA-256; nothing was recomputed)")
    assert main(["verify", str(alone), "--input", str(inbox / "renamed.csv")]) == 0
    out = capsys.readouterr().out
    assert "recorded in the manifest" in out          # the config was rebuilt from its text
    # the auditor's copy of the config points at the moved input: only [input] path differs
    edited = inbox / "renamed.toml"
    edited.write_text(edited.read_text().replace('path = "tower.csv"', 'path = "renamed.csv"'))
    assert main(["verify", str(alone), "--config", str(edited)]) == 0
    assert "differs at most in [input] path" in capsys.readouterr().out
    edited.write_text(edited.read_text() + "despike_z = 9.0\n")   # a setting: another config
    assert main(["verify", str(alone), "--config", str(edited)]) == 1


def _edit_first_value(path):
    """Add 1 to the first record's first value column of a CSV input (its NEE)."""
    lines = path.read_text().splitlines(keepends=True)
    fields = lines[1].rstrip("\n").split(",")
    fields[1] = f"{float(fields[1]) + 1.0:.3f}"
    lines[1] = ",".join(fields) + "\n"
    path.write_text("".join(lines))


def test_another_input_or_config_is_named(copy, capsys):
    """One changed byte of the input, or another config given, exits 1 naming both hashes."""
    recorded = json.loads((copy / "out" / "manifest.json").read_text())["provenance"]
    other = copy / "other.toml"
    other.write_text((copy / "site.toml").read_text() + "despike_z = 5.0\n")
    assert main(["verify", str(copy / "out"), "--config", str(other)]) == 1
    out = capsys.readouterr().out
    assert "site config" in out and recorded["site_config"]["sha256"] in out
    _edit_first_value(copy / "tower.csv")
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "input file" in out and recorded["input"]["sha256"] in out


def test_manifest_edits_are_tampering_and_each_field_is_named(copy, capsys):
    """Edited site, caution, reader record, setting and version: exit 1, every field named."""
    def change(manifest):
        manifest["site"]["name"] = "Another tower"
        manifest["caution"] = "Certified credits."
        manifest["provenance"]["reader"]["records_read"] += 1
        manifest["config"]["rg_tolerance"] = 40.0
        manifest["versions"]["numpy"] = "0.0.1"

    _edit_manifest(copy / "out", change)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "manifest.json was edited after it was written" in out
    for name in ("'site.name'", "'caution'", "'provenance.reader.records_read'",
                 "'config.rg_tolerance'"):
        assert f"manifest field {name} differs" in out, name
    assert "numpy" in out and "written with 0.0.1" in out
    with pytest.raises(InputFileError, match="manifest.json was edited"):
        import fluxpart

        fluxpart.load(copy / "out")


def test_resealed_manifest_edit_is_still_caught_by_the_rerun(copy):
    """A tamperer who recomputes the seal still fails on the field that differs."""
    _edit_manifest(copy / "out", lambda m: m["site"].update(name="Another tower"), reseal=True)
    report = verify(copy / "out")
    assert report.exit_code == 1
    assert [d.column for d in report.differences] == ["site.name"]


def test_another_runs_manifest_copied_in_is_named_as_the_replaced_file(copy, capsys):
    """Another run's manifest.json (the same bundle and input, seed 7, other.toml)
    copied over a result: only annual.parquet's SHA-256 differs (the seed moves the Monte
    Carlo draws alone), and it was named "changed after it was written" (faults35). The
    run log written with the tables names site.toml, the manifest other.toml, and the
    manifest's own input and settings reproduce its recorded SHA-256: the manifest is
    named as the likely replaced file. (A table edited after the run, its run log
    agreeing with its manifest, is still named alone: the code-change test below.)"""
    other = copy / "other.toml"
    other.write_text((copy / "site.toml").read_text().replace("seed = 0", "seed = 7"))
    process_site_config(other).write(copy / "other_out")
    shutil.copy(copy / "other_out" / "manifest.json", copy / "out" / "manifest.json")
    assert main(["verify", str(copy / "out"), "--quiet"]) == 1
    out = capsys.readouterr().out
    assert ("manifest.json likely another run's: the run log written with the tables names "
            "the site config 'site.toml', the manifest 'other.toml'; and its recorded input "
            "and settings reproduce exactly") in out
    assert "changed after it was written" not in out


@pytest.mark.parametrize("key", ["versions", "code", "platform"])
def test_environment_entry_edited_to_another_type_is_tampering_not_a_crash(folder_check_copy, key,
                                                                           capsys):
    """A manifest whose versions, code or platform entry is no JSON object: exit 1, named.

    It raised AttributeError / TypeError (a traceback) before.
    """
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    _edit_manifest(copy / "out", lambda m: m.update({key: 5}))
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "manifest.json was edited after it was written" in out
    named = {"versions": "library versions are not recorded",
             "code": "code fingerprint differs", "platform": "platform (not recorded"}[key]
    assert named in out


def test_a_folder_of_another_result_format_is_named_in_one_readable_line(folder_check_copy, capsys):
    """A manifest of another format (a folder an older or newer release wrote): exit 1 and
    the format line reads as the folder check words it; it printed "column 'manifest.json'
    format differ: stored has format ..., recomputed " (review, round five)."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    _edit_manifest(copy / "out", lambda m: m.update(format="fluxpart-result/1"), reseal=True)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert ("  folder: manifest.json has format 'fluxpart-result/1'; this fluxpart reads "
            "'fluxpart-result/2' (rerun to rewrite the folder)\n") in out
    assert "format differ" not in out


def test_extra_and_missing_files_are_named(folder_check_copy, capsys):
    """A stale table left in the folder and a deleted one: exit 1, both named; load refuses."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    shutil.copy(copy / "out" / "daily.parquet", copy / "out" / "parameters_old.parquet")
    (copy / "out" / "audit.parquet").unlink()
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "parameters_old.parquet is not listed in the manifest" in out
    assert "audit: audit.parquet" in out and "missing" in out
    assert main(["report", str(copy / "out")]) == 2
    err = capsys.readouterr().err
    assert "does not match its manifest: audit.parquet" in err and "1 more problem" in err


def test_tampered_result_moved_alone_is_found_tampered_without_its_input(copy, tmp_path,
                                                                        capsys):
    """A result folder handed on without its input, one table edited after writing: the
    folder's own check needs no input, so verify says NOT reproduced (exit 1) naming the
    table and that nothing was recomputed; it stopped at 'give --input' (exit 2)."""
    alone = tmp_path / "received" / "out"
    shutil.copytree(copy / "out", alone)
    (copy / "tower.csv").unlink()              # another machine: not where the run read it
    _set_value(alone, "annual", "nee", lambda v: v + 1.0, reseal=False)
    assert main(["verify", str(alone)]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT reproduced: 1 difference(s)") and "its manifest" in out
    assert "annual: file SHA-256" in out and "not recomputed" in out and "--input" in out
    # the note quotes the error without its command's prefix ("not recomputed: verify: ...")
    assert "note: not recomputed: the input file" in out
    (alone / "annual.parquet").unlink()                    # a missing table likewise
    assert main(["verify", str(alone), "--quiet"]) == 1


def test_empty_tables_compare_equal():
    """A table without rows (the u* bootstrap draws of ustar_bootstrap_draws = 0) equals
    its empty recomputation; verify stopped with a ValueError traceback (argmax of an
    empty float column) on such a result."""
    empty = pd.DataFrame({"draw": np.array([], dtype=np.int64),
                          "threshold": np.array([], dtype=np.float64)})
    assert compare_tables("parameters_ustar_bootstrap", empty, empty.copy()) == []
    grown = pd.DataFrame({"draw": [0], "threshold": [0.2]})
    assert [d.kind for d in compare_tables("t", empty, grown)] == ["rows"]


def test_altered_parquet_value_is_located(copy, capsys):
    """A hand-altered value: a hash mismatch and its table, column, row and both values."""
    original = float(read_table(copy / "out" / "annual.parquet")["nee"].iloc[0])
    changed = _set_value(copy / "out", "annual", "nee", lambda v: v + 1.0, reseal=False)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT reproduced")
    assert "annual: file SHA-256" in out and "recorded in manifest.json" in out
    year = read_table(copy / "out" / "annual.parquet").index[0]
    assert (f"annual: column 'nee' at year={year}: stored {changed!r}, recomputed "
            f"{original!r}") in out
    assert "timeseries" not in out                    # the other tables still match


def test_resealed_unit_or_site_metadata_edit_is_not_reproduced(copy, capsys):
    """Equal values under an edited unit or site UTC offset are another result: every
    reader (fluxpart.load, a modeller's Parquet reader) takes the unit and the site from
    the metadata. With the table hash and the seal forged, the rerun still names both
    edits (table, metadata key, both values) and exits 1."""
    path = copy / "out" / "daily.parquet"
    arrow = pq.read_table(path)
    fields = [item.with_metadata({**item.metadata, b"unit": b"kg m-2"})
              if item.name == "nee" else item for item in arrow.schema]
    table_meta = json.loads(arrow.schema.metadata[b"fluxpart"])
    table_meta["site"]["utc_offset"] = table_meta["site"]["utc_offset"] + 1.0
    schema = pa.schema(fields, metadata={b"fluxpart": json.dumps(table_meta).encode()})
    pq.write_table(arrow.cast(schema), path)
    _edit_manifest(copy / "out", lambda m: m["tables"]["daily"].update(sha256=file_sha256(path)),
                   reseal=True)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT reproduced")
    line = next(line for line in out.splitlines() if line.startswith("  daily: "))
    assert line.startswith("  daily: metadata only (values equal): ")
    assert "units of nee (stored 'kg m-2', recomputed 'g m-2')" in line
    assert "fluxpart.site.utc_offset (stored " in line
    assert "annual" not in out.split("result:")[0]          # the other tables still match
    # a unit is no wording: not said to leave the numbers reproduced (review56)
    assert "column descriptions" not in out and "what this means" not in out


def _reword(folder, table, texts):
    """Give columns of `table` other descriptions in all three copies the writer stores
    (field, fluxpart JSON, pandas copy), and reseal its hash as a writer would."""
    path = folder / f"{table}.parquet"
    arrow = pq.read_table(path)
    meta = dict(arrow.schema.metadata)
    info, attrs = json.loads(meta[b"fluxpart"]), json.loads(meta[b"PANDAS_ATTRS"])
    for column, text in texts.items():
        info["columns"][column]["description"] = text
        attrs["descriptions"][column] = text
    meta[b"fluxpart"], meta[b"PANDAS_ATTRS"] = json.dumps(info).encode(), json.dumps(attrs).encode()
    fields = [item.with_metadata({**item.metadata, b"description": texts[item.name].encode()})
              if item.name in texts else item for item in arrow.schema]
    pq.write_table(arrow.cast(pa.schema(fields, metadata=meta)), path)
    _edit_manifest(folder, lambda m: m["tables"][table].update(sha256=file_sha256(path)),
                   reseal=True)


def test_descriptions_as_an_earlier_release_wrote_them_verify_with_a_note(copy, capsys):
    """A folder of a release before a rewording (0.34.0's budget GPP and Reco without their
    sign, metadata52) holds each reworded description exactly as the registry's earlier
    text: verify exits 0, bit-identical, and names the columns worded so. The other
    direction (any other wording fails) is in the next test. Fact of the audit contract
    (DESIGN.md §4.1): the numbers decide, an edit is no rewording."""
    from fluxpart.schema import reworded

    earlier = {table: {column: next(e.earlier for e in schema.REWORDED_DESCRIPTIONS
                                    if e.column == column and table in e.tables)
                       for column in columns}
               for table, columns in (("annual", ("gpp_nighttime", "reco_daytime")),
                                      ("daily", ("gpp_daytime",)))}
    for table, texts in earlier.items():
        _reword(copy / "out", table, texts)
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    note = next(line for line in out.splitlines() if "descriptions worded as" in line)
    assert "before 0.35.0 reworded them (fluxpart.schema.REWORDED_DESCRIPTIONS): annual: " \
           "gpp_nighttime, reco_daytime; daily: gpp_daytime; every value" in note
    assert "file bytes differ from the rerun's by these words only" in note
    assert "values and metadata bit-identical" not in out     # the words do differ
    # the registry's entries: each names its release, and this code writes other words
    for entry in schema.REWORDED_DESCRIPTIONS:
        table = (entry.tables or ("ustar",))[0]
        assert entry.release == "0.35.0" and reworded(table, entry.column, entry.earlier) \
            == entry and reworded(table, entry.column, entry.earlier + " ") is None
        now = (schema.time_convention("10-01") if entry.column is None else
               schema.describe(table, entry.column, "10-01")[1])
        assert now != entry.earlier, entry


def test_a_description_reworded_by_other_code_names_the_code_as_likely_cause(
        copy, rerun_kept_in_test, monkeypatch, capsys):
    """An auditor's newer install rewords a column's description (values equal, as the
    ``ustar_threshold`` text after 0.30.0): NOT reproduced on the metadata, and the verdict
    names the changed code as the likely cause. The environment line no longer says so of
    "any difference" (review49), and the cause line had left metadata out: no cause at
    all was given."""
    import fluxpart.verify_folder as module

    real = module.code_fingerprint()
    monkeypatch.setattr(module, "code_fingerprint", lambda: {**real, "sha256": "f" * 64})
    path = copy / "out" / "daily.parquet"
    arrow = pq.read_table(path)
    fields = [item.with_metadata({**item.metadata, b"description": b"worded otherwise"})
              if item.name == "nee" else item for item in arrow.schema]
    pq.write_table(arrow.cast(pa.schema(fields, metadata=arrow.schema.metadata)), path)
    _edit_manifest(copy / "out", lambda m: m["tables"]["daily"].update(sha256=file_sha256(path)),
                   reseal=True)
    # beside it, an earlier release's wording (schema.REWORDED_DESCRIPTIONS, metadata52) of
    # one column, and that wording one character off in another: only the exact earlier
    # text is a note, the near one fails as an edit would
    gpp = next(e.earlier for e in schema.REWORDED_DESCRIPTIONS if e.column == "gpp_daytime")
    reco = next(e.earlier for e in schema.REWORDED_DESCRIPTIONS if e.column == "reco_daytime")
    _reword(copy / "out", "monthly", {"gpp_daytime": gpp, "reco_daytime": reco + "."})
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "monthly: metadata only (values equal): descriptions of reco_daytime (the texts: " \
           "verify --detail)" in out
    assert f"descriptions worded as release {__version__} wrote them, before 0.35.0 " \
           "reworded them (fluxpart.schema.REWORDED_DESCRIPTIONS): monthly: gpp_daytime; " \
           "these words are no difference; the differences listed are apart from them" in out
    # beside other differences the note no longer says the words are all that differs
    # (a 0.34.0 folder after widths52: "every value ... equals" below 16 differing values)
    assert "by these words only" not in out
    assert "daily: metadata only (values equal): descriptions of nee (the texts: verify " \
           "--detail)" in out
    assert "likely cause: the product's code differs" in out
    # and says at the head and after the list that only descriptions differ, what that
    # means for the numbers and what to do (0.31.0's folders under 0.32.0: 45 such lines
    # and no summary, review56)
    assert out.startswith("NOT reproduced: 2 difference(s)")
    assert ("all of them in the tables' column descriptions; every value equals its "
            "recomputation:") in out.splitlines()[0]
    assert ("what this means: the numbers are reproduced; only the words describing columns "
            "differ (no unit, site or setting), as the running release words them") in out
    assert "verify with the release that wrote the result" in out
    # --detail: the description in full, each copy that differs (review55: by default
    # three copies of each description in full read as 18 lines of ~1400 characters)
    assert main(["verify", "--detail", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "daily: metadata 'nee description' differs (values equal): stored 'worded " \
           "otherwise', recomputed" in out

def test_newer_code_that_states_other_intervals_says_the_central_values_hold(
        copy, monkeypatch, capsys):
    """Newer code that changed only the uncertainty (as gaplength50 did a 0.32.0 folder's
    σ, intervals and gap-filling error model, review61): the verdict says every central
    value is reproduced, that the differing ones are uncertainties, and what to do (verify
    with the writing release, or run again into a new folder). A changed central value
    under the same code change is not called an uncertainty; nor is a file edited after
    it was written (no code explains it). Fact of the audit contract (DESIGN.md §4.1)."""
    import fluxpart.verify_folder as module

    real = module.code_fingerprint()
    monkeypatch.setattr(module, "code_fingerprint", lambda: {**real, "sha256": "f" * 64})
    out_dir = copy / "out"
    _set_value(out_dir, "daily", "nee_sigma", lambda v: v * 1.3)
    _set_value(out_dir, "annual", "nee_ci95_low", lambda v: v - 1.0)
    assert main(["verify", str(out_dir)]) == 1
    out = capsys.readouterr().out
    assert ("what this means: every central value (budgets, fluxes, fits) is reproduced; "
            "the values that differ are uncertainties") in out
    assert "verify with the release that wrote it (result: below)" in out
    assert "run the input again into a new folder" in out
    # the same code change beside a changed central value, a unit, or a file edited
    # after it was written (no code explains it): no claim for the central values
    from fluxpart.verify import Difference, VerifyReport

    sigma = Difference("daily", "value", column="nee_sigma", row="date=2021-01-01")
    for extra, said in ((Difference("daily", "value", column="nee", row="date=2021-01-01"),
                         "the running release computes these values otherwise"),
                        (Difference("annual", "more", stored="nee_ci95_high, nee", count=2),
                         "the running release computes these values otherwise"),
                        (Difference("daily", "metadata", column="nee_sigma unit"),
                         "the running release computes these values otherwise"),
                        (Difference("daily", "hash", column="daily.parquet"), None),
                        (Difference("input", "input", column="input", row="x.csv"),
                         "the running release computes these values otherwise")):
        text = VerifyReport(out_dir, "run", differences=(sigma, extra),
                            code_changed=True).format()
        assert "every central value" not in text
        assert (said in text) if said else ("what this means" not in text)
    assert "what this means" not in VerifyReport(out_dir, "run", differences=(sigma,)).format()
    # another input file: nothing recomputed, no word on what the code computes
    other_input = Difference("input", "input", column="input", row="x.csv")
    assert "what this means" not in VerifyReport(out_dir, "run", differences=(other_input,),
                                                 code_changed=True).format()


def test_the_copies_of_a_reworded_description_are_one_item_per_column(monkeypatch, capsys):
    """A description is written three times per column (the Parquet field, the fluxpart
    table metadata, the pandas copy): verify printed each in full (review55: 18 lines of
    ~1400 characters for two columns). Without --detail a table is one line naming what
    differs and the columns, the count one per column; short texts are shown."""
    from fluxpart.verify import Difference, VerifyReport

    long_old, long_new = "1 sigma: " + "a" * 1400, "1 sigma: " + "b" * 1400
    found = [Difference("annual", "metadata", column=key, stored=long_old,
                        recomputed=long_new)
             for column in ("gpp_daytime_sigma", "reco_daytime_sigma")
             for key in (f"PANDAS_ATTRS.descriptions.{column}",
                         f"fluxpart.columns.{column}.description", f"{column} description")]
    found.append(Difference("annual", "metadata", column="nee unit", stored="kg m-2",
                            recomputed="g m-2"))
    report = VerifyReport(directory=Path("out"), source="run", tables=("annual",),
                          differences=tuple(found))
    text = report.format()
    assert text.splitlines()[0].startswith("NOT reproduced: 3 difference(s)")
    assert ("  annual: metadata only (values equal): descriptions of gpp_daytime_sigma, "
            "reco_daytime_sigma; units of nee (stored 'kg m-2', recomputed 'g m-2') (the "
            "texts: verify --detail)") in text.splitlines()
    assert long_old not in text and max(map(len, text.splitlines())) < 400
    detailed = report.format(detail=True)
    # the same count with --detail, the entries counted apart (review57: 3 plain, 7 detailed)
    assert detailed.splitlines()[0].startswith("NOT reproduced: 3 difference(s) between out "
                                               "and its recomputation (7 entries below: ")
    assert detailed.count(long_new) == 6
    # --quiet with --detail: the head line promised entries that --quiet leaves out
    import argparse

    import fluxpart.verify as module
    monkeypatch.setattr(module, "verify", lambda *args, **kwargs: report)
    assert module.command_verify(argparse.Namespace(directory="out", quiet=True,
                                                    detail=True)) == 1
    assert capsys.readouterr().out.splitlines()[0] == text.splitlines()[0].rstrip(":")
    # descriptions only beside rounding: the values are equal within rounding, not equal
    report = VerifyReport(directory=Path("out"), source="run", tables=("annual",),
                          differences=tuple(found[:3]), rounding=(Difference(
                              "annual", "rounding", column="nee", row="year=2021",
                              stored="1.0", recomputed="1.0000000001", relative=1e-10),))
    assert report.format().splitlines()[0].endswith(
        "every value equals its recomputation within rounding:")


def test_an_edited_file_names_its_edited_unit_and_a_description_edited_with_a_value(
        copy, rerun_kept_in_test, capsys):
    """A table edited after it was written (its SHA-256 not forged): its metadata were
    compared only where the rerun's file differed from the recorded one and every value
    was equal, so an edited unit, or a description edited beside a value, printed only
    "changed after it was written" (review57). Now each is named, and a description
    beside a differing value does not claim the values equal."""
    path = copy / "out" / "daily.parquet"
    arrow = pq.read_table(path)
    edit = {"nee": {b"unit": b"kg m-2"}, "gpp_daytime": {b"description": b"edited"}}
    fields = [item.with_metadata({**item.metadata, **edit.get(item.name, {})})
              for item in arrow.schema]
    pq.write_table(arrow.cast(pa.schema(fields, metadata=arrow.schema.metadata)), path)
    assert main(["verify", "--detail", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT reproduced: 3 difference(s)")          # hash, unit, description
    assert "daily.parquet was changed after it was written" in out
    assert "daily: metadata 'nee unit' differs (values equal): stored 'kg m-2'" in out
    assert "daily: metadata 'gpp_daytime description' differs (values equal): stored " \
           "'edited'" in out
    # one value edited too: the metadata line does not say the values are equal
    values = arrow.column("nee").to_pylist()
    values[3] += 0.5
    table = arrow.set_column(arrow.schema.get_field_index("nee"), "nee", pa.array(values))
    pq.write_table(table.cast(pa.schema(fields, metadata=arrow.schema.metadata)), path)
    assert main(["verify", str(copy / "out")]) == 1
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("NOT reproduced: 4 difference(s)")   # hash, value, unit, text
    assert any(line.startswith("  daily: column 'nee' at ") for line in lines)
    assert ("  daily: metadata (values differ too, listed apart): descriptions of "
            "gpp_daytime; units of nee (stored 'kg m-2', recomputed 'g m-2') (the texts: "
            "verify --detail)") in lines
    assert not any("values equal" in line for line in lines)


def _rewrite_metadata(folder, table, change):
    """Rewrite a table's file metadata by `change(dict)`, its hash and the seal forged."""
    path = folder / f"{table}.parquet"
    arrow = pq.read_table(path)
    meta = dict(arrow.schema.metadata)
    change(meta)
    pq.write_table(arrow.replace_schema_metadata(meta), path)
    _edit_manifest(folder, lambda m: m["tables"][table].update(sha256=file_sha256(path)),
                   reseal=True)


def test_tables_written_before_the_pandas_copy_still_verify(copy, capsys):
    """Tables of an earlier release carry no ``PANDAS_ATTRS`` key (the copy of their
    metadata that pandas.read_parquet loads into ``DataFrame.attrs``: pandas/io/parquet.py);
    the rerun writes it. Its absence is no difference (the key repeats the ``fluxpart``
    metadata, compared as before): bit-identical, exit 0, a note naming the cause rather
    than "library versions differ" -- one note listing the tables, not one line per table
    (a 0.22.0 result verified by 0.23.0 printed 14 such lines; review26)."""
    folder = copy / "out"
    for table in ("annual", "daily"):
        _rewrite_metadata(folder, table, lambda meta: meta.pop(b"PANDAS_ATTRS"))
        assert b"PANDAS_ATTRS" not in pq.read_schema(folder / f"{table}.parquet").metadata
    assert main(["verify", str(folder)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert ("note: annual, daily: values and metadata bit-identical, file bytes differ from "
            "the recorded ones (written before tables carried the copy of their metadata "
            "that pandas.read_parquet reads (PANDAS_ATTRS))") in out
    assert out.count("values and metadata bit-identical") == 1
    assert "monthly" not in out.split("values and metadata")[0].split("note:")[-1]


def test_an_edited_unit_in_the_pandas_copy_is_not_reproduced(copy, capsys):
    """A unit edited in the copy pandas reads misleads a plain pandas reader as much as one
    edited in the field metadata: with hash and seal forged it is named, exit 1."""
    def edit(meta):
        attrs = json.loads(meta[b"PANDAS_ATTRS"])
        attrs["units"]["nee"] = "kg m-2"
        meta[b"PANDAS_ATTRS"] = json.dumps(attrs).encode()

    folder = copy / "out"
    _rewrite_metadata(folder, "daily", edit)
    assert pd.read_parquet(folder / "daily.parquet").attrs["units"]["nee"] == "kg m-2"
    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert out.startswith("NOT reproduced")
    assert "daily: metadata only (values equal): units of nee (stored 'kg m-2', recomputed " \
           "'g m-2')" in out


def test_last_bit_change_is_rounding_and_exact_refuses_it(copy, rerun_kept_in_test,
                                                          reports_of_verify, capsys):
    """A one-ulp change in a consistent folder (as another CPU gives) is rounding: exit 0.

    ``numpy.nextafter`` moves the value to the adjacent double (IEEE 754), a relative
    change of at most 2.2e-16, far under the tolerance; `--exact` demands bit identity.
    """
    _set_value(copy / "out", "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))
    assert main(["verify", str(copy / "out")]) == 0
    (report,) = reports_of_verify                   # the report that CLI run printed
    assert report.reproduced and not report.identical
    assert 0 < report.largest_relative_difference <= 2.3e-16
    assert len(rerun_kept_in_test) == 1             # computed; --exact below compares anew
    out = capsys.readouterr().out
    assert out.startswith("reproduced within floating-point rounding (largest relative "
                          "difference")
    assert "daily: column 'nee' within rounding" in out
    assert main(["verify", str(copy / "out"), "--exact"]) == 1
    assert "NOT bit-identical (--exact)" in capsys.readouterr().out


def test_change_beyond_the_tolerance_is_not_rounding(copy):
    """A relative change 100 times the tolerance in a consistent folder: exit 1."""
    _set_value(copy / "out", "daily", "nee", lambda v: v * (1 + 100 * ROUNDING_TOLERANCE))
    report = verify(copy / "out")
    assert report.exit_code == 1
    assert [(d.table, d.column, d.kind) for d in report.differences] == [
        ("daily", "nee", "value")]


def test_changed_code_fingerprint_is_named_as_likely_cause(copy, rerun_kept_in_test,
                                                           monkeypatch, capsys):
    """Other code: reported as environment; with a differing value, named as likely cause."""
    import fluxpart.verify_folder as module

    real = module.code_fingerprint()
    monkeypatch.setattr(module, "code_fingerprint",
                        lambda: {**real, "sha256": "f" * 64})
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "code fingerprint differs" in out
    _set_value(copy / "out", "daily", "nee", lambda v: v + 1.0)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "likely cause: the product's code differs" in out
    # a table edited without resealing is named as the cause: changed code does not
    # explain a file whose SHA-256 is not the recorded one (review43: the code alone was
    # named, which an auditor could read as an all-clear for the edit)
    _set_value(copy / "out", "daily", "nee", lambda v: v + 1.0, reseal=False)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "likely cause: daily changed after it was written" in out
    assert "which no code change explains; the product's code differs too" in out


def test_changed_code_is_not_named_as_the_cause_of_an_edited_input(copy, monkeypatch, capsys):
    """An input file edited after the run, verified by another code version (an auditor's
    install): nothing is recomputed, so no code explains the difference, yet the
    environment line said "changed code is the likely cause of any difference" (review49).
    The fingerprint is still named as a fact; the cause stays the verdict's own."""
    import fluxpart.verify_folder as module

    real = module.code_fingerprint()
    monkeypatch.setattr(module, "code_fingerprint", lambda: {**real, "sha256": "f" * 64})
    _edit_first_value(copy / "tower.csv")
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "it is not the input file the result was computed from" in out
    assert "nothing was recomputed" in out and "code fingerprint differs" in out
    assert "likely cause" not in out


def test_demo_result_is_regenerated_and_verified(tmp_path):
    """A `fluxpart demo` result is recomputed from its seed (few draws, for speed)."""
    frame, _ = demo.site_year(seed=0)
    frame = frame.iloc[:SHORT_RECORDS]
    # a short demo record is not what demo.site_year regenerates: the rerun must differ
    result = process(frame, demo.site(), Config(ustar_method="fixed", random_error_draws=20),
                     provenance={"demo": {"seed": 0, "variant": "c3"}})
    folder = result.write(tmp_path / "demo")
    report = verify(folder)
    assert report.exit_code == 1 and report.source == "demo"
    assert any(d.kind == "rows" for d in report.differences)


def test_folder_without_manifest_is_a_clear_error(tmp_path, capsys):
    """A folder that is not a result exits 2 with one error line."""
    assert main(["verify", str(tmp_path)]) == 2
    assert "manifest.json" in capsys.readouterr().err


def test_several_input_files_are_found_or_given_once_each(tmp_path, capsys):
    """A record read from two files: found beside a moved bundle, or given with two --input."""
    config = make_bundle(tmp_path / "site")
    lines = (tmp_path / "site" / "tower.csv").read_text().splitlines(keepends=True)
    half = len(lines) // 2
    (tmp_path / "site" / "part1.csv").write_text("".join(lines[:half]))
    (tmp_path / "site" / "part2.csv").write_text("".join(lines[:1] + lines[half:]))
    (tmp_path / "site" / "tower.csv").unlink()
    config.write_text(config.read_text().replace('path = "tower.csv"',
                                                 'path = ["part1.csv", "part2.csv"]'))
    process_site_config(config).write(tmp_path / "site" / "out")
    moved = tmp_path / "moved"
    shutil.copytree(tmp_path / "site", moved)
    shutil.rmtree(tmp_path / "site")
    assert verify(moved / "out").identical
    alone = tmp_path / "alone"
    shutil.move(moved / "out", alone)
    assert main(["verify", str(alone), "--input", str(moved / "part1.csv")]) == 2
    assert "once for each" in capsys.readouterr().err
    assert main(["verify", str(alone), "--input", str(moved / "part1.csv"),
                 "--input", str(moved / "part2.csv")]) == 0
    # the right files in another order, or renamed, are matched by their SHA-256
    renamed = tmp_path / "renamed"
    renamed.mkdir()
    shutil.copy(moved / "part1.csv", renamed / "a.csv")
    shutil.copy(moved / "part2.csv", renamed / "b.csv")
    capsys.readouterr()
    assert main(["verify", str(alone), "--input", str(renamed / "b.csv"),
                 "--input", str(renamed / "a.csv")]) == 0, capsys.readouterr().out
    # the site config given as an input is a usage error, not a failed verification
    assert main(["verify", str(alone), "--input", str(moved / "site.toml"),
                 "--input", str(moved / "part2.csv")]) == 2
    assert "is the recorded site config" in capsys.readouterr().err
    assert main(["verify", str(alone), "--config", str(moved / "part1.csv")]) == 2
    assert "is a recorded input file" in capsys.readouterr().err


def test_input_files_of_a_glob_are_given_or_found_without_the_config(tmp_path, capsys):
    """A record read through a glob (``path = "logger/part*.csv"``), the result moved without
    its site config: the rerun takes the config from the manifest's copy, whose glob
    matched nothing beside that copy in a scratch folder (the error named the scratch
    folder) even with both files given with --input, or found beside the result."""
    config = make_bundle(tmp_path / "site")
    lines = (tmp_path / "site" / "tower.csv").read_text().splitlines(keepends=True)
    half = len(lines) // 2
    logger = tmp_path / "site" / "logger"
    logger.mkdir()
    (logger / "part1.csv").write_text("".join(lines[:half]))
    (logger / "part2.csv").write_text("".join(lines[:1] + lines[half:]))
    (tmp_path / "site" / "tower.csv").unlink()
    config.write_text(config.read_text().replace('path = "tower.csv"',
                                                 'path = "logger/part*.csv"'))
    process_site_config(config).write(tmp_path / "site" / "out")
    alone = tmp_path / "alone" / "out"
    alone.parent.mkdir()
    shutil.copytree(tmp_path / "site" / "out", alone)
    assert main(["verify", str(alone), "--input", str(logger / "part1.csv"),
                 "--input", str(logger / "part2.csv"), "--quiet"]) == 0, \
        capsys.readouterr().err
    shutil.copytree(logger, alone.parent / "logger")     # the data beside, the config not
    assert main(["verify", str(alone), "--quiet"]) == 0, capsys.readouterr().err


def test_python_written_result_is_checked_for_integrity_before_refusing(tmp_path, capsys):
    """Result.write without an input file: an intact folder exits 2 saying it matches its
    manifest but cannot be recomputed; a tampered table is still a failed verification
    (exit 1) that names the table whose SHA-256 no longer matches (review finding)."""
    frame, _ = demo.site_year(seed=0)
    result = process(frame.iloc[:SHORT_RECORDS], demo.site(),
                     Config(ustar_method="fixed", random_error_draws=20, clock_check="off"))
    folder = result.write(tmp_path / "py")
    assert main(["verify", str(folder)]) == 2
    assert "matches its manifest" in capsys.readouterr().err
    table = folder / "annual.parquet"
    data = pq.read_table(table)
    column = data.column_names.index("nee")
    data = data.set_column(column, "nee", pa.array([v + 1.0 for v in
                                                    data.column("nee").to_pylist()]))
    pq.write_table(data, table)
    report = verify(folder)
    assert report.exit_code == 1 and report.source == "none"
    assert any(d.kind == "hash" and d.table == "annual" for d in report.differences)
    assert main(["verify", str(folder)]) == 1
    assert "annual" in capsys.readouterr().out


def test_a_missing_folder_or_a_file_is_named_as_such(tmp_path, capsys):
    """verify of a folder that does not exist, or of a file, says so in one error line
    (fresh-eyes campaign: it named the manifest inside the missing folder)."""
    assert main(["verify", str(tmp_path / "absent")]) == 2
    assert "the result folder" in capsys.readouterr().err
    config = tmp_path / "site.toml"
    config.write_text("[site]\n", encoding="utf-8")
    assert main(["verify", str(config)]) == 2
    err = capsys.readouterr().err
    assert "is a file, not a result folder" in err and err.count("error:") == 1


def test_manifest_records_the_running_code_version():
    """The manifest's fluxpart version is the running code's __version__, not the installed
    distribution's metadata, which an editable install keeps from install time (it said
    0.3.0 under 0.4.0 code)."""
    import fluxpart
    from fluxpart.manifest import library_versions

    assert library_versions()["fluxpart"] == fluxpart.__version__


def test_input_changing_while_read_is_refused(tmp_path, monkeypatch):
    """A file that changes between the reader's pass and the SHA-256 recorded for it (a
    logger or a copy still writing) would record another file than the one computed from,
    so no file could ever verify the result: the run stops naming [input] path (review,
    0.12.0: 2 of 6 runs racing a file swap recorded the other file's SHA-256)."""
    from fluxpart.io import SiteConfig

    config = make_bundle(tmp_path)
    real_read = SiteConfig.read

    def read_then_append(self, **kwargs):
        result = real_read(self, **kwargs)
        with open(self.input_path, "a", encoding="utf-8") as handle:
            handle.write("\n")
        return result

    monkeypatch.setattr(SiteConfig, "read", read_then_append)
    with pytest.raises(InputFileError, match=r"\[input\] path: .*tower.csv changed while it "
                       r"was read"):
        process_site_config(config)


def test_code_fingerprint_is_taken_before_the_run(tmp_path, monkeypatch):
    """The recorded code fingerprint is the code loaded when the run started: it is cached
    per process and first computed at the start of process_site_config, so a package file
    edited during the run is not recorded as the code that ran (review, 0.12.0)."""
    import fluxpart.fingerprint as fingerprint

    fingerprint._package_digest.cache_clear()
    config = make_bundle(tmp_path)
    calls = []
    real = fingerprint._package_digest.__wrapped__

    def counted(package_dir):
        calls.append(package_dir)
        return real(package_dir)

    monkeypatch.setattr(fingerprint, "_package_digest",
                        fingerprint.lru_cache(maxsize=1)(counted))
    from fluxpart.io import SiteConfig
    real_read = SiteConfig.read

    def read_and_check(self, **kwargs):
        assert calls, "the fingerprint must be taken before the input is read"
        return real_read(self, **kwargs)

    monkeypatch.setattr(SiteConfig, "read", read_and_check)
    folder = process_site_config(config).write(tmp_path / "out")
    assert len(calls) == 1          # written with the fingerprint taken at the start
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["code"]["sha256"] == real(calls[0])[0]


def test_verify_says_the_report_folder_is_not_verified(folder_check_copy, capsys):
    """A report/ folder is outside the manifest's hashes (it is drawn from the tables):
    verify says so instead of letting "bit-identical" cover an edited page (review,
    0.12.0)."""
    out_dir = folder_check_copy / "out"
    (out_dir / "report").mkdir()
    (out_dir / "report" / "report.html").write_text("<p>edited</p>", encoding="utf-8")
    assert main(["verify", str(out_dir)]) == 0
    out = capsys.readouterr().out
    assert "note: report/: the page and its figures" in out and "not verified" in out


def test_a_killed_verify_leaves_no_scratch_for_long(tmp_path):
    """A verify killed mid-rerun (SIGKILL) left its scratch folder in the temporary
    folder for good; the next verify removes the folders of processes that no longer
    exist (POSIX kill(pid, 0) probes a process id), and keeps a running one's."""
    finished = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                              capture_output=True, text=True, check=True)
    dead = tmp_path / f"fluxpart-verify-{int(finished.stdout)}-x1y2"
    (dead / "out").mkdir(parents=True)
    (dead / "out" / "annual.parquet").write_bytes(b"partial")
    running = tmp_path / f"fluxpart-verify-{os.getpid()}-a3b4"
    running.mkdir()
    other = tmp_path / "fluxpart-verify-notanumber"
    other.mkdir()
    assert remove_dead_scratch(tmp_path) == [dead.name]
    assert not dead.exists() and running.exists() and other.exists()


def test_site_config_edited_after_the_run_names_the_changed_settings(copy, capsys):
    """The site config beside the result edited after the run (a setting changed, one
    added): verify reruns from the recorded copy, as before, and now says which settings
    differ, with both values, so the auditor knows the file at hand is not what ran.
    ``--quiet`` keeps that note (review75: it dropped it, and a reader of the file took
    its settings for the verified ones); the note line is as verify without it prints."""
    config = copy / "site.toml"
    text = config.read_text()
    assert "[processing]" in text
    config.write_text(text + "despike_z = 9.0\n")
    assert main(["verify", str(copy / "out"), "--quiet"]) == 0
    out = capsys.readouterr().out.splitlines()
    assert [line.split(":")[0] for line in out] == ["bit-identical", "result", "note", "Caution"]
    assert "is another version; changed since the run: [processing] despike_z (absent) -> 9.0" \
        in out[2]


def test_another_seed_given_with_config_is_named_with_both_values(copy, capsys):
    """An auditor's copy of the site config with another seed, given with --config:
    refused as before (the recorded SHA-256 decides), and the setting that differs named
    with both values (round mistakes48: only "not the site config" before). Same input,
    config and seed give the same tables: a seed differing is the cause to name (common
    practice of reproducible runs)."""
    other = copy / "auditor.toml"
    text = (copy / "site.toml").read_text()
    assert "\nseed = 0\n" in text
    other.write_text(text.replace("\nseed = 0\n", "\nseed = 7\n"))
    assert main(["verify", str(copy / "out"), "--config", str(other)]) == 1
    out = capsys.readouterr().out
    assert ("it is not the site config the result was computed from; changed since the "
            "run: [processing] seed 0 -> 7, so nothing was recomputed") in out


def test_one_flipped_byte_is_named_by_its_file_even_quiet(folder_check_copy, capsys):
    """One byte of a Parquet file flipped (bit rot, a hand edit): exit 1, and the file is
    named by its name on disk, also in the one-line verdict of --quiet, which named no file
    before (review, round six)."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    path = copy / "out" / "daily.parquet"
    data = bytearray(path.read_bytes())
    data[len(data) // 2] ^= 0x01
    path.write_bytes(bytes(data))
    assert main(["verify", str(copy / "out"), "--quiet"]) == 1
    first = capsys.readouterr().out.splitlines()[0]
    assert first.startswith("NOT reproduced") and "daily.parquet changed" in first
    assert main(["verify", str(copy / "out")]) == 1
    assert "(daily.parquet was changed after it was written)" in capsys.readouterr().out


def test_quiet_verdict_names_a_missing_an_unlisted_file_and_an_edited_manifest(folder_check_copy,
                                                                               capsys):
    """--quiet named only tables whose bytes changed: a table deleted, a file added by a
    file manager (.DS_Store) or an edited manifest gave 'NOT reproduced: 1 difference(s)'
    and no name (review round seven)."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    out = copy / "out"
    # a file manager's .DS_Store is a note since round faults21 (a Finder copy of a
    # genuine result verifies); a file a user added is still a difference
    (out / "notes.txt").write_text("checked\n")
    assert main(["verify", str(out), "--quiet"]) == 1
    first = capsys.readouterr().out.splitlines()[0]
    assert "notes.txt is not listed in the manifest" in first
    (out / "notes.txt").unlink()
    (out / "daily.parquet").unlink()
    assert main(["verify", str(out), "--quiet"]) == 1
    first = capsys.readouterr().out.splitlines()[0]
    assert "daily.parquet is listed in the manifest but missing" in first
    manifest = out / "manifest.json"
    manifest.write_text(manifest.read_text().replace('"seed": 0', '"seed": 1', 1))
    assert main(["verify", str(out), "--quiet"]) == 1
    first = capsys.readouterr().out.splitlines()[0]
    assert "manifest.json was edited after it was written" in first


def test_identity_of_several_input_files_does_not_give_the_first_the_lists_hash():
    """A run of two downloads records the SHA-256 of the files' names and hashes
    (SiteConfig.input_sha256); verify's 'result:' line printed it as the first file's
    own ('input a.csv (sha256 8f0e...)'), which `sha256sum a.csv` contradicts. The line
    now names the count and what the hash is of (review round nine; hashes: hashlib)."""
    import hashlib

    from fluxpart.verify import result_identity

    own = {name: hashlib.sha256(name.encode()).hexdigest() for name in ("a.csv", "b.csv")}
    combined = hashlib.sha256("".join(f"{n}\t{h}\n" for n, h in own.items()).encode()
                              ).hexdigest()
    manifest = {"seed": 0, "provenance": {"input": {
        "path": "/data/a.csv", "sha256": combined,
        "files": [{"path": f"/data/{n}", "sha256": h} for n, h in own.items()]}}}
    line = result_identity(manifest)
    assert f"a.csv (sha256 {combined[:12]}" not in line
    assert (f"input a.csv and 1 more file(s) (sha256 of their names and hashes "
            f"{combined[:12]}...)") in line
    single = {"seed": 0, "provenance": {"input": {"path": "/data/a.csv",
                                                  "sha256": own["a.csv"]}}}
    assert f"input a.csv (sha256 {own['a.csv'][:12]}...)" in result_identity(single)
    # monthly files of one name in year folders (a ** glob): the recorded path, not "01.csv"
    yearly = {"seed": 0, "provenance": {"input": {
        "path": "../data/2022/01.csv", "sha256": combined,
        "files": [{"path": f"../data/{year}/01.csv", "sha256": own["a.csv"]}
                  for year in (2022, 2023)]}}}
    assert "input ../data/2022/01.csv and 1 more file(s)" in result_identity(yearly)
    # a demo folder names its data's seed beside the run's (review43: `demo --seed 1` read
    # "seed 0; the invented demo site")
    demo = {"seed": 0, "provenance": {"demo": {"seed": 1, "variant": "c3"}}}
    assert result_identity(demo).startswith("seed 0; the invented demo site (data seed 1, "
                                            "variant c3)")


def test_a_difference_column_rounds_with_its_operands():
    """A column that is the difference of two others carries their rounding, not a
    rounding relative to its own size: sums that agree to 1e-8 relative leave their
    difference agreeing to 1e-8 of the sums, which is 1e-5 of a difference a thousandth
    of them (cancellation; Higham 2002, Accuracy and Stability of Numerical Algorithms,
    §1.7 (m)). With AVX-512 switched off (NPY_DISABLE_CPU_FEATURES) the demo site's
    daily method differences moved so and verify said NOT reproduced. A change of the
    difference itself beyond its operands' rounding is still a difference."""
    def budget(day, night, scenarios):
        frame = pd.DataFrame({"gpp_daytime": day, "gpp_nighttime": night})
        frame["gpp_method_difference"] = frame.gpp_daytime - frame.gpp_nighttime
        frame["gpp_relative_difference"] = (frame.gpp_method_difference
                                            / (0.5 * (frame.gpp_daytime + frame.gpp_nighttime)).abs())
        for name, values in zip(("p16", "p50", "p84"), scenarios, strict=True):
            frame[f"nee_ustar_{name}"] = values
        p = frame[["nee_ustar_p16", "nee_ustar_p50", "nee_ustar_p84"]]
        frame["nee_ustar_spread"] = p.max(axis=1) - p.min(axis=1)
        return frame

    day, night = np.array([1.0, 1500.0]), np.array([0.999, 1499.2])
    scenarios = (np.array([-240.0, -250.0]), np.array([-240.2, -250.1]),
                 np.array([-240.5, -250.3]))
    stored = budget(day, night, scenarios)
    shifted = budget(day * (1 + 1e-8), night, [s * (1 + 1e-8) for s in scenarios[:2]]
                     + [scenarios[2]])
    own = (shifted.gpp_method_difference - stored.gpp_method_difference).abs().max() / 1e-3
    assert own > ROUNDING_TOLERANCE                    # what the old comparison judged
    found = compare_tables("daily", stored, shifted)
    assert {d.column for d in found} == {"gpp_daytime", "gpp_method_difference",
                                         "gpp_relative_difference", "nee_ustar_p16",
                                         "nee_ustar_p50", "nee_ustar_spread"}
    assert {d.kind for d in found} == {"rounding"}
    edited = stored.copy()
    edited.loc[0, "gpp_method_difference"] += 1e-4      # 1e-4 of its operands
    assert [(d.column, d.kind) for d in compare_tables("daily", stored, edited)] == [
        ("gpp_method_difference", "value")]


def test_a_barely_determined_parameter_rounds_with_its_standard_error():
    """A fit stops once its step is below 0.01 standard errors, so on another CPU a
    parameter the data barely determine (β0 = 15.5 ± 299, review round twelve, AVX2 and
    AVX-512 switched off) and its standard error move by ~1e-6 of themselves. In a table
    of fitted parameters the parameter is compared relative to its standard error and the
    standard error to STANDARD_ERROR_TOLERANCE; a change beyond that, or the same change
    in a budget table, is still a difference."""
    from fluxpart.verify import STANDARD_ERROR_TOLERANCE

    stored = pd.DataFrame({"beta0": [15.5, 30.0], "beta0_se": [299.1774558485785, 1.2]})
    moved = stored.copy()
    moved.loc[0, "beta0"] *= 1 + 1e-5               # 5e-7 of its standard error
    moved.loc[0, "beta0_se"] *= 1 + 6e-6
    found = compare_tables("parameters_daytime", stored, moved)
    assert {(d.column, d.kind) for d in found} == {("beta0", "rounding"),
                                                   ("beta0_se", "rounding")}
    assert {(d.column, d.kind) for d in compare_tables("annual", stored, moved)} == {
        ("beta0", "value"), ("beta0_se", "value")}
    beyond = stored.copy()
    beyond.loc[0, "beta0_se"] *= 1 + 10 * STANDARD_ERROR_TOLERANCE
    assert [(d.column, d.kind) for d in compare_tables("parameters_daytime", stored,
                                                       beyond)] == [("beta0_se", "value")]


def test_a_computed_manifest_number_rounds_like_a_table_cell():
    """A model-choice criterion in the manifest (a sum of absolute residuals, a BIC
    difference) summed in another order differs in its last digits (IEEE 754: the
    adjacent double, numpy.nextafter); the demo site's rerun with AVX-512 switched off
    said NOT reproduced for 1 ulp there. It is rounding now; a larger change, or any
    change of a setting (read, not computed), is still a difference."""
    from fluxpart.verify import VerifyReport
    from fluxpart.verify_fields import _compare_manifests

    criterion = 1536.041710628546
    stored = {"config": {"despike_z": 4.0},
              "provenance": {"respiration_driver": {"sad": {"tair": criterion},
                                                    "choice": "tair"}}}
    again = json.loads(json.dumps(stored))
    again["provenance"]["respiration_driver"]["sad"]["tair"] = float(
        np.nextafter(criterion, np.inf))
    found = _compare_manifests(stored, again)
    assert [(d.kind, d.column) for d in found] == [
        ("rounding", "provenance.respiration_driver.sad.tair")]
    report = VerifyReport(directory=Path("out"), source="run", tables=("annual",),
                          rounding=tuple(found))
    assert report.exit_code == 0 and "within rounding" in report.format()
    again["provenance"]["respiration_driver"]["sad"]["tair"] = criterion * (1 + 1e-4)
    again["config"]["despike_z"] = float(np.nextafter(4.0, np.inf))
    assert sorted((d.kind, d.column) for d in _compare_manifests(stored, again)) == [
        ("manifest", "config.despike_z"), ("manifest", "provenance.respiration_driver.sad.tair")]


def test_a_long_manifest_field_shows_where_the_two_values_part():
    """Behaviour check (review round eighteen): a warning reworded after its first 200
    characters was shown as two identical 197-character beginnings, so the verdict named
    the field but not the difference. Both values now start shortly before the first
    character where they differ; short values are shown whole as before."""
    from fluxpart.verify_fields import _compare_manifests

    head = "daytime partitioning: " + "x" * 300
    stored = {"warnings": [head + "; the nighttime method's E0 (236 K) was used there"]}
    again = {"warnings": [head + "; the median over the record of the nighttime E0 was used"]}
    (found,) = _compare_manifests(stored, again)
    assert found.column == "warnings"
    assert found.stored.startswith("...") and found.recomputed.startswith("...")
    assert "the nighttime method's E0 (236 K)" in found.stored
    assert "the median over the record" in found.recomputed
    assert found.stored != found.recomputed and len(found.stored) <= 203
    (short,) = _compare_manifests({"seed": 0}, {"seed": 7})
    assert (short.stored, short.recomputed) == ("0", "7")


def test_verify_names_what_a_stopped_run_left_beside_the_folder(folder_check_copy, capsys):
    """A run killed (kill -9) into an earlier result leaves that result whole and its
    staging folder beside it; verify said 'bit-identical' for the earlier result without
    a word of the stopped run, which a user who started that run reads as its result.
    The staging folder is made by the writer's own make_staging; the contract (README,
    'Output files') is that the folder is the earlier complete result."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    from fluxpart.resultdir import make_staging

    staging = make_staging(copy / "out")
    shutil.copy(copy / "out" / "annual.parquet", staging)     # a half-written new result
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert f"note: {staging.name} beside the folder" in out and "stopped" in out
    shutil.rmtree(staging)
    assert main(["verify", str(copy / "out")]) == 0
    assert "beside the folder" not in capsys.readouterr().out


def test_an_input_with_converted_line_endings_is_restored_and_rerun(copy, capsys):
    """A bundle unzipped with `unzip -a` or checked out by git with core.autocrlf gets its
    CSV's LF line endings turned into CR LF (the Windows text convention): same records,
    another SHA-256. Round faults18 named the conversion with exit 1; round faults21
    reruns the recorded bytes, restored by converting the line endings back, since they
    have the recorded SHA-256 exactly (SHA-256, FIPS 180-4: the recorded file is known
    whole), and names the conversion in a note: a genuine result verifies after a git
    clone. An input changed otherwise keeps the plain message and exit 1."""
    tower = copy / "tower.csv"
    original = tower.read_bytes()
    tower.write_bytes(original.replace(b"\n", b"\r\n"))
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert "note: input file:" in out and "re-saved otherwise" in out
    assert tower.read_bytes() == original.replace(b"\n", b"\r\n")     # left as it was
    tower.write_bytes(original.replace(b"\n", b"\n ", 1))     # one byte more: no re-saving
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "it is not the input file" in out and "line endings" not in out
    # the site config with CR LF holds the recorded settings (TOML reads both line ends)
    tower.write_bytes(original)
    config = next(copy.glob("*.toml"))
    config.write_bytes(config.read_bytes().replace(b"\n", b"\r\n"))
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "line endings); the recorded text was used" in out


def test_a_manifest_with_a_repeated_key_is_refused_not_passed(copy, capsys):
    """JSON (RFC 8259 section 4: names within an object SHOULD be unique; Python's
    ``json`` keeps the last of a repeated name) let a second ``"despike_z": 9.0`` typed
    above the written one through verify, diff and report unseen: the seal covers the
    parsed content, so the folder verified bit-identical while its file showed a reader
    another setting (review round thirteen). Now every reader of the folder refuses it,
    one line naming the key."""
    path = copy / "out" / "manifest.json"
    text = path.read_text(encoding="utf-8")
    assert '"despike_z": ' in text
    path.write_text(text.replace('"despike_z": ', '"despike_z": 9.0,\n    "despike_z": ', 1),
                    encoding="utf-8")
    for argv in (["verify", str(copy / "out"), "--quiet"], ["diff", str(copy / "out"),
                 str(copy / "out")], ["report", str(copy / "out"), "--quiet"]):
        assert main(argv) == 2, argv
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and "has the key 'despike_z' twice" in err[0], (argv, err)
    assert not (copy / "out" / "report").exists()


@pytest.mark.parametrize("reseal", [False, True])
def test_a_manifest_setting_edited_out_of_range_is_not_reproduced(reseal, request, capsys):
    """A setting edited in the manifest to a value Config refuses (despike_z = 50, beyond
    the 2..20 its check allows; the 4 of Papale et al. 2006 (m) written) was a ConfigError,
    exit 2, naming "[processing]" of a site config that holds no such value (review round
    thirteen). The folder fails its seal, or (resealed) the rerun from the site config gives
    another value: NOT reproduced, exit 1, the field named where the rerun ran. (Not
    resealed, the seal decides: the rerun of `folder_check_copy` serves.)"""
    copy = request.getfixturevalue("copy" if reseal else "folder_check_copy")
    _edit_manifest(copy / "out", lambda m: m["config"].update(despike_z=50.0), reseal=reseal)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    if reseal:
        assert "manifest field 'config.despike_z' differs: stored 50.0, recomputed 4.0" in out
    else:
        assert "manifest.json was edited after it was written" in out


def test_a_rerun_that_cannot_be_written_is_named_as_verify_s_own(bundle, tmp_path):
    """Under a file-size limit (``ulimit -f``, setrlimit RLIMIT_FSIZE: a write beyond it
    fails with EFBIG, POSIX) the rerun's scratch folder cannot be written. The message named
    that scratch folder as "the result folder" whose "earlier result" was unchanged (review
    round thirteen); it names verify's temporary folder, keeps the folder verified unjudged
    (exit 2, not a verdict) and leaves no scratch behind."""
    import resource

    def small_files():
        resource.setrlimit(resource.RLIMIT_FSIZE, (20_000, 20_000))

    scratch_root = tmp_path / "tmp"
    scratch_root.mkdir()
    done = subprocess.run([sys.executable, "-m", "fluxpart", "verify", str(bundle / "out"),
                           "--quiet"], preexec_fn=small_files, capture_output=True, text=True,
                          timeout=300, env={**os.environ, "TMPDIR": str(scratch_root)})
    lines = done.stderr.strip().splitlines()
    assert done.returncode == 2, done.stderr[-2000:]
    assert len(lines) == 1 and lines[0].startswith("error: verify: the rerun could not be "
                                                   f"written to a scratch folder in "
                                                   f"{str(scratch_root)!r} (File too large)")
    assert "not judged" in lines[0] and done.stdout == ""
    assert list(scratch_root.iterdir()) == []


def test_a_manifest_resaved_with_a_byte_order_mark_still_verifies(copy, rerun_kept_in_test,
                                                                  capsys):
    """A byte-order mark (U+FEFF encoded as EF BB BF, the Unicode Standard's UTF-8 BOM) that
    an editor adds on saving, with CR LF line ends and another indent, changes no content:
    the seal covers the parsed manifest. The BOM alone made verify, diff and report exit 2
    ("Unexpected UTF-8 BOM (decode using utf-8-sig)", review round thirteen), while the
    re-indented file verified. A value edited beside it is still tampering."""
    path = copy / "out" / "manifest.json"
    text = json.dumps(json.loads(path.read_text(encoding="utf-8")), indent=4)
    path.write_bytes(b"\xef\xbb\xbf" + text.replace("\n", "\r\n").encode("utf-8"))
    assert main(["verify", str(copy / "out"), "--quiet"]) == 0
    assert main(["diff", str(copy / "out"), str(copy / "out")]) == 0
    capsys.readouterr()
    path.write_bytes(b"\xef\xbb\xbf" + text.replace('"despike_z": 4.0', '"despike_z": 5.0')
                     .encode("utf-8"))
    assert main(["verify", str(copy / "out"), "--quiet"]) == 1
    assert "manifest.json was edited after it was written" in capsys.readouterr().out


def test_a_killed_reports_staging_is_a_note_not_a_difference(folder_check_copy, capsys):
    """A report stopped outright (``kill -9``, a closed terminal) leaves its staging folder
    ``.report.staging-*`` inside the result folder. The report is not covered by the
    manifest's hashes (report/ may hold anything), so that leftover is no change of the
    result: verify named a genuine result "NOT reproduced" (exit 1) for it; now a note,
    exit 0. Any other unlisted entry is still a difference (DESIGN.md §4.1: exit 1)."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    killed = copy / "out" / ".report.staging-k1ll3d00"
    killed.mkdir()
    (killed / "daily_fluxes.png").write_bytes(b"half a figure")
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert "note: .report.staging-k1ll3d00/ is what an interrupted `fluxpart report` left" in out
    (copy / "out" / ".report.notes").mkdir()
    assert main(["verify", str(copy / "out"), "--quiet"]) == 1
    assert ".report.notes/" in capsys.readouterr().out


def test_a_run_replacing_the_folder_while_verify_reads_it_is_read_again(copy, monkeypatch):
    """A run swaps a new result into the folder (a rename) just after verify checked the
    old manifest and before it read the tables: verify compared one result's manifest with
    the other's tables and said NOT reproduced (22 value differences on the demo, each
    folder genuine). The folder's identity (POSIX stat st_dev, st_ino: a renamed-in folder
    is another inode) changed, so everything is read again from the folder now there."""
    from fluxpart import resultdir

    other_config = make_bundle(copy, name="other.toml", draws=21)
    process_site_config(other_config).write(copy / "other")
    real = resultdir.check_folder
    swapped = []

    def check_then_swap(directory, manifest):
        problems = real(directory, manifest)
        if not swapped:
            swapped.append(directory)
            os.rename(copy / "out", copy / "old")
            os.rename(copy / "other", copy / "out")
        return problems

    monkeypatch.setattr(resultdir, "check_folder", check_then_swap)
    report = verify(copy / "out")
    assert swapped and report.exit_code == 0, report.format()
    assert report.identical
    manifest = json.loads((copy / "out" / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["config"]["random_error_draws"] == 21      # the result now there


def test_tables_kept_as_links_into_a_content_store_verify(folder_check_copy, capsys):
    """git-annex and DVC keep each file of a tracked folder as a symbolic link into their
    content store (git-annex walkthrough, "adding files" (m); DVC's `cache.type = symlink`
    (m)). A genuine result checked out so was "NOT reproduced", every table and the
    manifest named as "not a plain file"; the hashes read through the links match, so it
    is reproduced. A link whose content was not fetched is named once, as such."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    store = copy / "store"
    store.mkdir()
    folder = copy / "out"
    for path in sorted(folder.iterdir()):
        if path.suffix == ".parquet" or path.name == "manifest.json":
            kept = store / file_sha256(path)
            path.rename(kept)
            path.symlink_to(os.path.relpath(kept, folder))
    assert main(["verify", str(folder), "--quiet"]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")
    (store / file_sha256((folder / "daily.parquet").resolve())).unlink()
    assert main(["verify", str(folder), "--quiet"]) == 1
    out = capsys.readouterr().out
    assert "1 difference(s)" in out and "daily.parquet is a symbolic link to a file that is "\
        "not there" in out


def test_a_folder_given_as_input_or_config_is_named_as_a_folder(bundle, capsys):
    """`--input DIR` (the input's folder for the file) was refused as "does not exist",
    though the folder is there; the message now says it is a folder (POSIX: a directory
    is not a regular file). Nothing is recomputed (exit 2, one `error:` line)."""
    folder = str(bundle / "out")
    assert main(["verify", folder, "--input", str(bundle)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "given with --input is a folder, not a file" in err[0]
    assert main(["verify", folder, "--config", str(bundle)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "given with --config is a folder, not a file" in err[0]
    assert main(["verify", folder, "--input", str(bundle / "absent.csv")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_a_table_rewritten_by_pandas_says_whether_its_values_changed(copy, rerun_kept_in_test,
                                                                     capsys):
    """A table read and written back with pandas (`read_parquet` then `to_parquet`,
    pandas' own default RangeIndex) loses fluxpart's metadata: verify said only that it
    was unreadable, not whether the numbers changed. Now it compares the values pandas
    reads (pandas documents the round trip of values and dtypes through pyarrow) with the
    rerun: bit-identical values are said to be so; one changed value is located. The
    verdict stays NOT reproduced (exit 1): the file is not the one written."""
    folder = copy / "out"
    pd.read_parquet(folder / "annual.parquet").to_parquet(folder / "annual.parquet")
    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert "annual.parquet was rewritten by another program" in out
    assert "the rewritten file's values are bit-identical to the rerun's" in out
    daily = pd.read_parquet(folder / "daily.parquet")
    daily.loc[daily.index[3], "nee"] += 1.0
    daily.to_parquet(folder / "daily.parquet")
    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert "column 'nee' at date=" in out and "(1 row differs" in out
    assert "daily: the rewritten file's values are not the rerun's where listed" in out


def test_a_result_reached_through_a_symbolic_link_finds_its_input(folder_check_copy, tmp_path,
                                                                  capsys):
    """`latest -> /runs/2021/out` from another folder: the input recorded as
    `../tower.csv` was looked for beside the link (the path's `..` taken by name), said
    missing, exit 2; `..` of the real folder leads to its real parent (POSIX path
    resolution), where the input is. The run log (not hashed) is made to name another
    place of the run, so the input is not found where the run read it instead
    (`verify_inputs._places_at_run`): the link's real parent decides (round verifytrim:
    with the log naming the folder, the test passed without that step)."""
    bundle = folder_check_copy           # finding the input decides, before the rerun
    log_path = bundle / "out" / "run-log.json"
    log = json.loads(log_path.read_text(encoding="utf-8"))
    log["result_folder"], log["working_directory"] = (str(tmp_path / "gone" / "out"),
                                                      str(tmp_path / "gone"))
    log_path.write_text(json.dumps(log, indent=2), encoding="utf-8")
    elsewhere = tmp_path / "shortcuts"
    elsewhere.mkdir()
    link = elsewhere / "latest"
    link.symlink_to(bundle / "out", target_is_directory=True)
    assert not (elsewhere / "tower.csv").exists()
    assert main(["verify", str(link), "--quiet"]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")


def test_a_staging_folder_beside_the_result_is_noted_without_claiming_whose(folder_check_copy,
                                                                            capsys):
    """A run killed after swapping its result in but before removing the old one (the
    swap exchanges the two folders: the staging name then holds the earlier result) leaves
    the new result in the folder; the note said the folder held "not that run's" result,
    wrong in that case. It now names both possibilities; the verdict is the folder's."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    staging = copy / ".out.staging-k1ll3d00"
    staging.mkdir()
    (staging / "annual.parquet").write_bytes(b"half of the earlier result")
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert ".out.staging-k1ll3d00 beside the folder" in out
    assert "not that run's" not in out and "just after swapping its result in, its own" in out


def test_an_input_name_decomposed_by_a_mac_copy_is_found(tmp_path, capsys):
    """macOS (HFS+) stores file names decomposed (Unicode normal form NFD, Unicode Standard
    Annex #15: "ü" as "u" + U+0308), so `grün.csv` copied through a Mac is another byte
    string than the composed (NFC) name recorded: verify said the input "does not exist"
    beside a file that looks identical. The other normal form is looked for too."""
    import unicodedata

    config = make_bundle(tmp_path)
    composed = unicodedata.normalize("NFC", "grün.csv")
    (tmp_path / "tower.csv").rename(tmp_path / composed)
    config.write_text(config.read_text().replace('path = "tower.csv"', f'path = "{composed}"'))
    process_site_config(config).write(tmp_path / "out")
    decomposed = unicodedata.normalize("NFD", composed)
    assert decomposed != composed
    (tmp_path / composed).rename(tmp_path / decomposed)
    assert main(["verify", str(tmp_path / "out"), "--quiet"]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")


def test_the_input_put_into_the_result_folder_is_named_as_the_input(folder_check_copy, capsys):
    """A result folder sent with its input file inside it: verify called it "not listed in
    the manifest", like any stray file, without saying it is the genuine input (SHA-256
    from hashlib equal to the recorded one) or that moving it to its recorded place is the
    fix. The verdict is unchanged (exit 1): the folder is not the one written; a file
    that is not the input is still only "not listed"."""
    copy = folder_check_copy      # the rerun it compares with: see that fixture
    shutil.copy(copy / "tower.csv", copy / "out" / "tower.csv")
    (copy / "out" / "notes.txt").write_text("mine\n")
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert ("tower.csv is the run's input file (its recorded SHA-256), put into the result "
            "folder") in out and "'../tower.csv' relative to the folder" in out
    assert "notes.txt is not listed in the manifest" in out


def test_a_result_written_before_events_existed_verifies_bit_identical(copy, capsys):
    """A 0.21.0 result's config has no ``events`` key (the setting is new in 0.22.0) and a
    run without events is 0.21.0's, table for table. Its rerun wrote ``events: []`` into
    the recomputed settings, so verify called every older result "NOT reproduced"
    (manifest field 'config.events' differs: stored (absent), recomputed []; review23)
    and batch took every older site result for stale. Removing the key as 0.21.0 wrote it
    (resealed as a writer would) now verifies bit-identical."""
    _edit_manifest(copy / "out", lambda m: m["config"].pop("events", None), reseal=True)
    assert main(["verify", str(copy / "out")]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")


def test_a_result_of_a_fixed_threshold_the_site_config_did_not_state_is_rerun(tmp_path):
    """Before 0.24.0 `ustar_method = "fixed"` without `ustar_threshold` ran at the default
    0.2 m s-1, and the manifest recorded it; since then `run` refuses such a site config.
    The audit contract (DESIGN.md §4.1: the same input and settings give the same tables)
    asks that such a sealed result can still be rerun: verify takes the threshold the
    result recorded, says so in a note, and finds it bit-identical (review29: before, it
    stopped with the refusal's `error:` line, exit 2, for every such older result)."""
    path = make_bundle(tmp_path)
    text = path.read_text().replace("ustar_threshold = 0.2\n", "")
    path.write_text(text)
    with pytest.raises(Exception, match="needs ustar_threshold"):
        Config.from_toml(path)                  # a new run is refused, as since 0.24.0
    # the result as 0.23.0 wrote it: the settings from the site config, 0.2 taken
    older = Config.from_toml(path, recorded_threshold=0.2)
    result = process_site_config(path, older)
    assert result.provenance["settings"] == "site config"
    result.write(tmp_path / "out")
    report = verify(tmp_path / "out")
    assert report.reproduced and report.exit_code == 0
    assert any('ustar_method = "fixed" without ustar_threshold' in note and "0.2 m s-1" in note
               for note in report.notes)


def test_another_release_statement_of_the_checked_coverage_is_a_note(bundle, monkeypatch,
                                                                     capsys):
    """The manifest's ``provenance.uncertainty.checked`` states the writing release's
    benchmark coverage and is restated at each release (review33): verify of an earlier
    release's result by later code keeps the verdict on the numbers (bit-identical, exit 0)
    and notes the two statements; before review33 the changed text alone made the result
    "NOT reproduced" (exit 1). Its tables are still compared bit for bit."""
    from fluxpart import uncertainty

    stored = json.loads((bundle / "out" / "manifest.json").read_text())
    assert stored["provenance"]["uncertainty"]["checked"] == uncertainty.CALIBRATION_CHECK
    monkeypatch.setattr(uncertainty, "CALIBRATION_CHECK",
                        "fluxpart 9.9.9 on other generated site-years: other figures")
    assert main(["verify", str(bundle / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert "note: provenance.uncertainty.checked" in out and "9.9.9" not in out


@pytest.fixture(scope="module")
def earlier_and_current(tmp_path_factory):
    """Two folders of one short bundle with a bootstrapped u* threshold (45 days, 10
    draws; a fixed threshold has no spread, so ``night_donor_margin`` would change
    nothing): `earlier`, written with ``night_donor_margin = "none"`` and its manifest
    then made as a release before 0.34.0 wrote it (the settings from the site config,
    which names neither added setting; the recorded settings lacking both; resealed with
    the project's own seal), and `current`, written by this code from the site config
    (the new default). Returns (earlier, current)."""
    import warnings

    from fluxpart import FluxpartWarning
    from fluxpart.config import ADDED_SETTINGS

    root = tmp_path_factory.mktemp("added_settings")
    path = make_bundle(root, records=24 * 2 * 45)
    path.write_text(path.read_text().replace('ustar_method = "fixed"\nustar_threshold = 0.2\n',
                                             "ustar_bootstrap_draws = 10\n"))
    config = Config.from_toml(path)
    assert config.night_donor_margin == "threshold_spread"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FluxpartWarning)    # a partial year
        process_site_config(path, dataclasses.replace(config, night_donor_margin="none",
                                                      driver_day_prior="night")
                            ).write(root / "earlier")
        process_site_config(path).write(root / "current")

    def as_earlier_release(manifest):
        for added in ADDED_SETTINGS:
            del manifest["config"][added.name]
        manifest["provenance"]["settings"] = "site config"

    _edit_manifest(root / "earlier", as_earlier_release, reseal=True)
    return root / "earlier", root / "current"


def test_a_setting_added_since_the_writing_release_reruns_at_its_earlier_value(
        earlier_and_current, capsys):
    """A folder whose recorded settings lack ``night_donor_margin`` (a 0.33.0 folder) is
    rerun with "none", 0.33.0's fills: bit-identical, exit 0, one note per added setting
    and no manifest difference; with the new default its NEE tables would differ (they
    differ from `current`'s). Audit contract (DESIGN.md §4.1): the stored config is the
    result's record, and a setting it does not name had the writing release's behaviour."""
    earlier, current = earlier_and_current
    assert any(not read_table(earlier / f"{name}.parquet").equals(
        read_table(current / f"{name}.parquet")) for name in ("annual", "daily"))
    assert main(["verify", str(earlier)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert ('note: night_donor_margin is absent from the recorded settings (added in 0.34.0): '
            'rerun with "none", the behaviour of the release that wrote the folder') in out
    assert "manifest field" not in out


def test_a_folder_naming_the_added_setting_verifies_as_before(earlier_and_current, capsys):
    """A folder that records ``night_donor_margin = "threshold_spread"`` (written by this
    code) is rerun with it, not with the earlier value: bit-identical without the note
    (its tables differ from those of "none", the earlier folder's)."""
    _, current = earlier_and_current
    assert json.loads((current / "manifest.json").read_text())["config"][
        "night_donor_margin"] == "threshold_spread"
    assert main(["verify", str(current)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "absent from the recorded settings" not in out


def test_a_loaded_folder_of_an_earlier_release_says_what_computed_it(earlier_and_current):
    """``fluxpart.load`` of a folder whose recorded settings lack ``night_donor_margin``
    (a 0.33.0 folder) gives "none", the value that computed its tables, not this
    release's default (leftovers54); a folder that records the setting keeps it. A
    loaded result written again records the setting it was computed with."""
    import fluxpart

    earlier, current = earlier_and_current
    assert "night_donor_margin" not in json.loads((earlier / "manifest.json").read_text())[
        "config"]
    assert fluxpart.load(earlier).config.night_donor_margin == "none"
    # driver_day_prior (0.33.0) has been written into every result since; its default
    # became "mixture" in 0.38.0, so a folder without it computed as "night" (review87)
    assert fluxpart.load(earlier).config.driver_day_prior == "night"
    assert fluxpart.load(current).config.driver_day_prior == "mixture"
    assert fluxpart.load(current).config.night_donor_margin == "threshold_spread"
    assert Config().night_donor_margin == "threshold_spread"


def test_each_added_setting_names_a_setting_and_an_accepted_earlier_value():
    """The registry of settings added after a release: each is a setting, its earlier
    value one ``Config`` accepts, its release a version number."""
    from dataclasses import fields

    from fluxpart.config import ADDED_SETTINGS, absent_added_settings

    names = {f.name for f in fields(Config)}
    for added in ADDED_SETTINGS:
        assert added.name in names
        assert getattr(Config(**{added.name: added.earlier}), added.name) == added.earlier
        assert all(part.isdigit() for part in added.release.split("."))
    assert absent_added_settings(Config().to_dict()) == ()
    assert absent_added_settings({}) == ADDED_SETTINGS
    assert absent_added_settings(None) == ()


def test_a_message_names_a_recorded_file_relative_to_the_result_folder(tmp_path, monkeypatch):
    """The manifest records an input's path relative to the result folder, and its
    messages named the file by the path the run was given (``'site/g.csv'`` from the
    folder it ran in, or a whole path: leftovers54). Both spellings are written relative
    to the folder; a quoted name that leads to no recorded file, or to another file of
    that name, is kept."""
    from fluxpart.manifest import portable_messages

    data = tmp_path / "site" / "g.csv"
    data.parent.mkdir()
    data.write_text("stamp,nee\n")
    (tmp_path / "other").mkdir()
    (tmp_path / "other" / "g.csv").write_text("stamp,nee\n")
    provenance = {"input": {"path": str(data), "sha256": "0"},
                  "site_config": {"path": str(tmp_path / "site" / "g.toml"), "sha256": "1"}}
    monkeypatch.chdir(tmp_path)
    texts = ["input file 'site/g.csv': 2 blank line(s) above the header (line 3) read past",
             f"input: input file {str(data)!r}: 3 value(s) outside",
             "input file 'other/g.csv' is another file", "column 'nee' read", 7]
    assert portable_messages(texts, provenance, tmp_path / "out") == [
        "input file '../site/g.csv': 2 blank line(s) above the header (line 3) read past",
        "input: input file '../site/g.csv': 3 value(s) outside",
        "input file 'other/g.csv' is another file", "column 'nee' read", 7]


def test_a_run_names_its_input_relative_to_its_folder_and_verifies_without_a_note(
        tmp_path, monkeypatch, capsys):
    """A run started in the input's folder and one given the whole path record the same
    reader note, naming the input as the manifest's input record does; moved as a
    whole, the bundle verifies bit-identical without a note on the spelling."""
    config = make_bundle(tmp_path / "bundle" / "site")
    data = config.parent / "tower.csv"
    data.write_text("\n\n" + data.read_text())
    monkeypatch.chdir(config.parent)
    assert main(["run", "site.toml", "--out", "../out", "--quiet"]) == 0
    assert main(["run", str(config), "--out", str(tmp_path / "bundle" / "whole"),
                 "--quiet"]) == 0
    capsys.readouterr()
    for name in ("out", "whole"):
        manifest = json.loads((tmp_path / "bundle" / name / "manifest.json").read_text())
        assert manifest["provenance"]["input"]["path"] == "../site/tower.csv"
        assert manifest["provenance"]["reader"]["notes"] == [
            "input file '../site/tower.csv': 2 blank line(s) above the header (line 3) read past"]
    shutil.move(tmp_path / "bundle", tmp_path / "moved")
    monkeypatch.chdir(tmp_path)
    assert main(["verify", "moved/out"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "note: warnings" not in out


def test_messages_naming_the_input_by_its_path_as_given_are_compared_so():
    """A run given its site config in the input's folder names ``'g.csv'`` in its
    warnings, its rerun by `verify` the whole path: a 0.33.0 folder of such a run was "NOT
    reproduced" on the warnings alone, under its own code (review65). The recomputed
    messages are respelled as the stored ones name the file; another file name, or a
    message that differs otherwise, stays a difference."""
    stored = {"provenance": {"input": {"path": "../g.csv", "sha256": "0"},
                             "reader": {"warnings": ["input file 'g.csv': 3 value(s) outside"]}},
              "warnings": ["input: input file 'g.csv': 3 value(s) outside", "u* fixed"]}
    recomputed = json.loads(json.dumps(stored).replace("'g.csv'", "'/data/site/g.csv'"))
    respelled, pairs = respelled_inputs(stored, recomputed)
    assert pairs == [("/data/site/g.csv", "g.csv")]
    assert respelled == stored
    assert "'/data/site/g.csv'" in json.dumps(recomputed)        # its argument unchanged
    other = json.loads(json.dumps(recomputed).replace("3 value(s)", "4 value(s)"))
    assert respelled_inputs(stored, other)[0] != stored
    renamed = json.loads(json.dumps(stored).replace("'g.csv'", "'/data/site/h.csv'"))
    assert respelled_inputs(stored, renamed) == (renamed, [])
    assert respelled_inputs(stored, stored) == (stored, [])


def test_the_ustar_scenarios_sums_are_uncertainties_not_central_values(tmp_path):
    """The u* scenarios' sums and spread (``*_ustar_p16`` … ``*_ustar_spread``) are the u*
    part's inputs, not central values: a code change that moved only them and the σ built
    on them (speed56: a 0.35.0 folder's daytime u* columns) says every central value is
    reproduced (review72: "computes these values otherwise" before); the threshold itself
    (``ustar_threshold``) and a central sum are central values. Fact of the audit contract
    (DESIGN.md §4.1)."""
    from fluxpart.verify import Difference, VerifyReport

    def report(*columns):
        return VerifyReport(tmp_path, "run", code_changed=True, differences=tuple(
            Difference("annual", "value", column=column, row="year=2021")
            for column in columns))

    moved = report("gpp_daytime_ustar_p84", "reco_daytime_ustar_spread",
                   "nee_ustar_seasonal", "nee_ustar_year", "gpp_daytime_uncertainty_total")
    assert moved.uncertainty_only
    assert ("every central value (budgets, fluxes, fits) is reproduced; the values that "
            "differ are uncertainties (sigmas, intervals, error models, the u* scenarios' "
            "sums)") in moved.format()
    for central in ("ustar_threshold", "gpp_daytime", "nee"):
        assert not report("gpp_daytime_ustar_p84", central).uncertainty_only, central
