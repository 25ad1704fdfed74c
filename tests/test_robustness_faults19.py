"""Result safety and portable verify on an auditor's or a scientist's machine (round faults19).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit 2,
before any computation where it can be known then; nothing is half-written; a genuine
result verifies wherever it is copied. External facts used: POSIX ``NAME_MAX`` of 255 bytes
a file name on the common file systems (ext4, XFS, Btrfs; common practice), read here from
``os.pathconf``; Python's ``surrogateescape`` carrying a file name's bytes that are not UTF-8
as lone surrogates U+DC80-U+DCFF (PEP 383); an ASCII text stream refusing characters above
U+007F (Python ``codecs``).
"""

import io
import json
import os
import shutil
from pathlib import Path

import pytest
from bundles import make_bundle

import fluxpart.pipeline as pipeline
from fluxpart import export, store
from fluxpart.batch import SiteOutcome, _write_failures
from fluxpart.cli import main
from fluxpart.errors import InputFileError, OutputError
from fluxpart.manifest import read_manifest
from fluxpart.resultdir import check_folder


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def _no_computing(monkeypatch):
    """Make any computation fail the test: the refusal must come before it."""
    def refuse(*args, **kwargs):
        raise AssertionError("the run computed before refusing")
    monkeypatch.setattr(pipeline, "process_site_config", refuse)


def _latin1_folder(parent: Path, stem: str = "gr") -> Path:
    """A folder whose name holds the latin-1 byte 0xFC (ü), which is not UTF-8 (PEP 383)."""
    folder = parent / os.fsdecode(stem.encode() + b"\xfc")
    try:
        folder.mkdir()
    except (OSError, UnicodeEncodeError):       # macOS and Windows refuse such names
        pytest.skip("this file system refuses names that are not UTF-8")
    return folder


# --------------------------------------------------------------------------- names too long

def test_an_out_name_without_room_for_its_staging_folder_is_refused_before_computing(
        tmp_path, capsys, monkeypatch):
    """A name within NAME_MAX but within 18 bytes of it was computed in full, then failed at
    its staging folder ('.NAME.staging-XXXXXXXX') with "File name too long"."""
    config = make_bundle(tmp_path / "site")
    limit = os.pathconf(tmp_path, "PC_NAME_MAX")        # 255 on ext4/XFS/tmpfs (POSIX)
    out = tmp_path / ("r" * (limit - 10))               # fits alone, not with ".staging-..."
    _no_computing(monkeypatch)
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    line = _one_error_line(capsys)
    assert f"at most {limit - 18} bytes" in line
    assert not out.exists() and not any(p.name.startswith(".r") for p in tmp_path.iterdir())


# --------------------------------------------------------------------------- output encoding

@pytest.mark.parametrize("errors", ["strict", "surrogateescape"])
def test_run_on_an_ascii_terminal_prints_its_result_and_exits_0(tmp_path, monkeypatch,
                                                                errors):
    """stdout in ASCII (PYTHONIOENCODING=ascii: strict; LC_ALL=C with PYTHONUTF8=0: Python
    takes surrogateescape there): the first '–' of the output raised UnicodeEncodeError,
    exit 1 after the result had been written."""
    config = make_bundle(tmp_path / "site")
    raw = io.BytesIO()
    stream = io.TextIOWrapper(raw, encoding="ascii", errors=errors, write_through=True)
    monkeypatch.setattr("sys.stdout", stream)
    assert main(["run", str(config), "--out", str(tmp_path / "out")]) == 0
    text = raw.getvalue().decode("ascii")                # ASCII bytes only (codecs)
    assert "Wrote" in text and "\\u" in text             # escaped, not lost
    assert stream.errors == errors                       # the caller's stream as it was
    assert (tmp_path / "out" / "manifest.json").is_file()


# --------------------------------------------------------------------------- names not UTF-8

def test_an_input_in_a_folder_named_in_another_code_page_is_refused_before_computing(
        tmp_path, capsys, monkeypatch):
    """The manifest (UTF-8 JSON) could not hold the recorded path: a UnicodeEncodeError
    traceback after the whole run."""
    config = make_bundle(_latin1_folder(tmp_path))
    _no_computing(monkeypatch)
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    line = _one_error_line(capsys)
    assert "not UTF-8" in line and "gr\\\\xfc/tower.csv" in line
    assert not (tmp_path / "out").exists()


def test_a_working_folder_named_in_another_code_page_still_writes_the_run_log(
        tmp_path, monkeypatch):
    """Only the unhashed run log records the working folder: it failed the write."""
    config = make_bundle(tmp_path / "site")
    here = _latin1_folder(tmp_path, "cwd")
    monkeypatch.chdir(here)
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    log = json.loads((tmp_path / "out" / "run-log.json").read_text(encoding="utf-8"))
    assert log["working_directory"].endswith("cwd\\xfc")


def test_tables_in_a_folder_named_in_another_code_page_are_read(written_demo, tmp_path):
    """pyarrow encodes a path given as text in UTF-8: every table of a genuine result was
    "not a readable Parquet file ... damaged" (verify: 15 differences)."""
    folder = _latin1_folder(tmp_path, "result")
    shutil.copy(written_demo[1] / "daily.parquet", folder / "daily.parquet")
    expected = store.read_table(written_demo[1] / "daily.parquet")
    frame = store.read_table(folder / "daily.parquet")
    assert frame.equals(expected) and frame.attrs["units"] == expected.attrs["units"]
    assert store.table_shape(folder / "daily.parquet") == (len(expected),
                                                           [expected.index.name,
                                                            *expected.columns])


def test_batch_failures_table_takes_a_path_named_in_another_code_page(tmp_path):
    """A failing site's config path with a latin-1 byte ended the whole batch in a
    traceback (Arrow strings are UTF-8)."""
    config = os.fsdecode(b"/data/gr\xfcn/site.toml")
    outcome = SiteOutcome(key="site", config=config, directory=str(tmp_path / "site"),
                          status="failed", error="OutputError", message=f"bad {config}",
                          kind="output")
    frame = _write_failures([outcome], tmp_path)
    assert frame["config"].iloc[0] == "/data/gr\\xfcn/site.toml"
    assert store.read_table(tmp_path / "failures.parquet").loc["site", "config"] \
        == "/data/gr\\xfcn/site.toml"


# --------------------------------------------------------------------------- names changed

def test_a_manifest_whose_name_changed_case_is_named_as_such(written_demo, tmp_path):
    """A copy that upper-cased the names was "not a fluxpart result folder"."""
    folder = tmp_path / "result"
    shutil.copytree(written_demo[1], folder)
    (folder / "manifest.json").rename(folder / "MANIFEST.JSON")
    with pytest.raises(InputFileError, match="'MANIFEST.JSON' does"):
        read_manifest(folder)


def test_a_manifest_that_is_a_pipe_is_not_called_absent(written_demo, tmp_path):
    folder = tmp_path / "result"
    shutil.copytree(written_demo[1], folder)
    (folder / "manifest.json").unlink()
    os.mkfifo(folder / "manifest.json")
    with pytest.raises(InputFileError, match="is not a plain file"):
        read_manifest(folder)


def test_a_table_whose_name_changed_case_is_named_with_the_fix(written_demo, tmp_path):
    folder = tmp_path / "result"
    shutil.copytree(written_demo[1], folder)
    manifest = read_manifest(folder)
    (folder / "daily.parquet").rename(folder / "Daily.parquet")
    missing = [p for p in check_folder(folder, manifest) if p.kind == "missing"]
    assert len(missing) == 1 and "'Daily.parquet' is there" in missing[0].detail


# --------------------------------------------------------------------------- files changing

def test_a_site_config_saved_while_the_run_reads_is_refused(tmp_path, monkeypatch):
    """The site came from one version, the settings from the next and the recorded text
    from the first: "given by the caller", and verify said NOT reproduced of a genuine
    result. Now refused like an input changed while read."""
    config = make_bundle(tmp_path / "site")
    from fluxpart import io as fio

    read = fio.SiteConfig.read

    def saved_meanwhile(self, *args, **kwargs):
        config.write_text(config.read_text().replace("seed = 0", "seed = 7"))
        return read(self, *args, **kwargs)

    monkeypatch.setattr(fio.SiteConfig, "read", saved_meanwhile)
    with pytest.raises(InputFileError, match="changed while the run read it"):
        pipeline.process_site_config(config)


def test_an_error_at_closing_the_netcdf_temporary_file_is_one_error(written_demo, tmp_path,
                                                                     monkeypatch):
    """A network file system reports a failed write at close (EIO, EDQUOT): that escaped as
    an OSError traceback and left the temporary file."""
    opened = []
    mkstemp, close, fdopen = export.tempfile.mkstemp, os.close, os.fdopen

    def recording(*args, **kwargs):
        handle, name = mkstemp(*args, **kwargs)
        opened.append(handle)
        return handle, name

    def failing(handle):
        close(handle)
        if handle in opened:
            raise OSError(5, os.strerror(5))            # EIO

    class FailingAtClose:
        """The temporary file's stream (round faults22 writes it through os.fdopen): its
        close reports the failed write."""

        def __init__(self, stream):
            self.stream = stream

        def __getattr__(self, name):
            return getattr(self.stream, name)

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.stream.close()
            raise OSError(5, os.strerror(5))            # EIO

    def opening(handle, *args, **kwargs):
        stream = fdopen(handle, *args, **kwargs)
        return FailingAtClose(stream) if handle in opened else stream

    monkeypatch.setattr(export.tempfile, "mkstemp", recording)
    monkeypatch.setattr(export.os, "close", failing)
    monkeypatch.setattr(export.os, "fdopen", opening)
    target = tmp_path / "result.nc"
    with pytest.raises(OutputError, match="writing failed"):
        export.write_netcdf(written_demo[0], target)
    assert opened and list(tmp_path.iterdir()) == []


def test_the_run_records_the_settings_of_the_text_it_records(tmp_path):
    """The command line passes no settings of its own: the manifest says they came from the
    site config, whose recorded text holds them (what verify reruns)."""
    config = make_bundle(tmp_path / "site")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    manifest = read_manifest(tmp_path / "out")
    assert manifest["provenance"]["settings"] == "site config"
    assert "random_error_draws = 20" in manifest["provenance"]["site_config"]["text"]
    assert manifest["config"]["random_error_draws"] == 20


def test_a_report_is_drawn_in_a_folder_named_in_another_code_page(written_demo, tmp_path):
    """The page (UTF-8) could not hold the folder's name: a UnicodeEncodeError traceback."""
    from fluxpart.report import build_report

    folder = _latin1_folder(tmp_path, "result") / "out"
    shutil.copytree(written_demo[1], folder)
    page = build_report(folder)
    assert page.is_file() and page.read_bytes().decode("utf-8")
    assert check_folder(folder, read_manifest(folder)) == []


@pytest.mark.parametrize("command", ["run", "report"])
def test_a_path_through_a_symbolic_link_loop_is_one_error_line(tmp_path, capsys, command):
    """Path.resolve raises RuntimeError on a link loop (Python < 3.13; POSIX ELOOP later):
    `run --out loop/x` and `report loop` ended in a traceback."""
    loop = tmp_path / "loop"
    loop.symlink_to(loop)
    config = make_bundle(tmp_path / "site")
    argv = (["run", str(config), "--out", str(loop / "x"), "--quiet"] if command == "run"
            else ["report", str(loop)])
    assert main(argv) == 2
    assert "symbolic link back to itself" in _one_error_line(capsys)


def test_a_netcdf_name_without_room_for_its_temporary_file_names_the_fix(written_demo,
                                                                         tmp_path):
    """A name within NAME_MAX whose '.NAME.xxxxxxxx.tmp' is not: "cannot write ... choose a
    writable place", in a writable place."""
    limit = os.pathconf(tmp_path, "PC_NAME_MAX")        # 255 on ext4/XFS/tmpfs (POSIX)
    target = tmp_path / ("e" * (limit - 10) + ".nc")
    with pytest.raises(OutputError, match=f"at most {limit - 14} bytes"):
        export.write_netcdf(written_demo[0], target)
    assert list(tmp_path.iterdir()) == []


def test_verify_reruns_from_an_input_given_in_a_folder_named_in_another_code_page(
        tmp_path, capsys):
    """An auditor's copy of the input in such a folder, given with --input: the rerun's
    scratch manifest could not hold its path (a traceback; with the refusal above, "could
    not be written"). The rerun's paths are never compared: it verifies."""
    config = make_bundle(tmp_path / "site")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    copy = _latin1_folder(tmp_path, "audit") / "tower.csv"
    shutil.copy(tmp_path / "site" / "tower.csv", copy)
    (tmp_path / "site" / "tower.csv").unlink()
    capsys.readouterr()
    assert main(["verify", str(tmp_path / "out"), "--input", str(copy), "--quiet"]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")


def _whole_floats_as_integers(value):
    """What jq 1.6 and JavaScript's JSON.stringify write for a whole float: 250.0 -> 250
    (ECMA-262 Number::toString (m); jq 1.6 prints numbers with %.17g (m))."""
    if isinstance(value, float) and value.is_integer():
        return int(value)
    if isinstance(value, dict):
        return {k: _whole_floats_as_integers(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_whole_floats_as_integers(v) for v in value]
    return value


def test_a_manifest_reindented_by_jq_or_javascript_keeps_its_seal(written_demo, tmp_path):
    """`jq . manifest.json` or JSON.stringify drop the '.0' of whole floats (daytime_beta0_max
    250.0 -> 250): a genuine result was "edited after it was written", NOT reproduced."""
    folder = tmp_path / "result"
    shutil.copytree(written_demo[1], folder)
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    assert any(isinstance(v, float) and v.is_integer() for v in manifest["config"].values())
    reformatted = _whole_floats_as_integers(manifest)
    (folder / "manifest.json").write_text(json.dumps(reformatted, indent=2), encoding="utf-8")
    assert [p for p in check_folder(folder, read_manifest(folder)) if p.kind == "seal"] == []
    if shutil.which("jq"):                               # the tool itself, where installed
        import subprocess

        text = subprocess.run(["jq", ".", str(written_demo[1] / "manifest.json")],
                              capture_output=True, check=True, text=True).stdout
        (folder / "manifest.json").write_text(text, encoding="utf-8")
        assert [p for p in check_folder(folder, read_manifest(folder))
                if p.kind == "seal"] == []
    reformatted["config"]["seed"] = reformatted["config"]["seed"] + 1      # still an edit
    (folder / "manifest.json").write_text(json.dumps(reformatted, indent=2), encoding="utf-8")
    assert [p.kind for p in check_folder(folder, read_manifest(folder))] == ["seal"]


def test_a_seal_of_an_earlier_release_still_holds(written_demo, tmp_path):
    """Seals written before faults19 hashed whole floats as written ('250.0')."""
    import hashlib

    from fluxpart.manifest import seal_intact

    manifest = json.loads((written_demo[1] / "manifest.json").read_text(encoding="utf-8"))
    content = {k: v for k, v in manifest.items() if k != "seal"}
    legacy = hashlib.sha256(json.dumps(content, sort_keys=True, separators=(",", ":"),
                                       ensure_ascii=False).encode("utf-8")).hexdigest()
    assert seal_intact({**manifest, "seal": legacy})
    assert not seal_intact({**manifest, "seal": legacy, "seed": manifest["seed"] + 1})


def test_a_folder_in_place_of_the_lock_file_is_named_with_its_fix(tmp_path, capsys,
                                                                   monkeypatch):
    """'.OUT.lock' a folder: "Is a directory; choose a writable output folder", in a
    writable place (POSIX open(2) of a directory for writing fails with EISDIR)."""
    config = make_bundle(tmp_path / "site")
    (tmp_path / ".out.lock").mkdir()
    _no_computing(monkeypatch)
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    assert "is a folder, which fluxpart never makes; remove it" in _one_error_line(capsys)
    assert not (tmp_path / "out").exists()


def test_verify_names_a_pipe_given_as_input_as_such(tmp_path, capsys):
    """`--input <(zcat tower.csv.gz)` (a named pipe, POSIX mkfifo) "does not exist"."""
    config = make_bundle(tmp_path / "site")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    capsys.readouterr()
    pipe = tmp_path / "tower.csv"
    os.mkfifo(pipe)
    assert main(["verify", str(tmp_path / "out"), "--input", str(pipe), "--quiet"]) == 2
    assert "is not a plain file (a pipe or a device)" in _one_error_line(capsys)


# --------------------------------------------------------------------------- memory limits

def test_the_tokenizer_out_of_memory_does_not_blame_the_file():
    """pandas' C parser says "Error tokenizing data. C error: out of memory" under a memory
    limit (ulimit -v 400 MB here); the message blamed the file and its delimiter."""
    from fluxpart.io import _parser_message

    text = _parser_message(Path("tower.csv"), ",",
                           "Error tokenizing data. C error: out of memory")
    assert "ran out of memory" in text and "not at fault" in text and "delimiter" not in text


def test_running_out_of_memory_is_one_error_line(tmp_path, capsys, monkeypatch):
    """NumPy's _ArrayMemoryError (a MemoryError) under ulimit -v 700 MB ended `run` in a
    traceback."""
    config = make_bundle(tmp_path / "site")

    def exhausted(*args, **kwargs):
        raise MemoryError("Unable to allocate 16.0 MiB")

    monkeypatch.setattr(pipeline, "process_site_config", exhausted)
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    assert "ran out of memory" in _one_error_line(capsys)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["site"]


def test_the_blas_of_the_platform_record_is_loaded_before_computing(tmp_path, monkeypatch):
    """OpenBLAS loaded with the address space nearly used up retries its buffers without end
    (measured: ulimit -v 500 MB, SciPy's OpenBLAS loaded for the platform record after the
    run: 10 CPU minutes, the folder locked). It is loaded first now."""
    from fluxpart import fingerprint

    order = []
    monkeypatch.setattr(fingerprint, "load_blas_libraries", lambda: order.append("blas"))

    def computing(*args, **kwargs):
        order.append("compute")
        raise MemoryError

    monkeypatch.setattr(pipeline, "process_site_config", computing)
    config = make_bundle(tmp_path / "site")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    assert order == ["blas", "compute"]
