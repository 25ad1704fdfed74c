"""Result safety, portable verify and batch faults (round faults26).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit
2, nothing half-written or left behind; a batch site that fails is named alone, the
others and the network tables go on (exit 1); a result records the code that computed
it. External facts used, each named beside its check: ENOSPC is returned when a file
system's blocks or its inodes are used up (open(2), mkdir(2) (m)); ``statvfs`` reports
free inodes in ``f_favail`` (statvfs(3) (m)); Dask runs a submitted function in the
worker's own process and imports (Dask.distributed documentation, "Futures" (m));
Python raises ``TypeError: ... got an unexpected keyword argument 'NAME'`` for a keyword
a function lacks (Python language reference, "Calls" (m)). Invented Quillmoor bundles
only, for known-truth recovery.
"""

import errno
import os
from pathlib import Path

import pytest
from bundles import make_bundle

from fluxpart import batch, store
from fluxpart.cli import main
from fluxpart.manifest import library_versions
from fluxpart.worker_match import (
    WorkerMismatchError,
    client_environment,
    mismatch_error,
    older_worker_error,
)

# --------------------------------------------------------------------------- worker code


def test_a_worker_of_other_code_fails_its_site_before_writing(tmp_path):
    """A Dask worker started from another copy of fluxpart (``--scheduler`` with a
    worker of an older install or a stale ``PYTHONPATH``) wrote its sites with its own
    code, the batch said "processed" and a rerun found them up to date by the worker's
    code (measured: 3 sites written with code d8505de2..., the client's 0a1c2ca9...).
    Now the task carries the client's code fingerprint and library versions and a
    worker that differs fails the site before reading or writing (known truth: the
    folder stays absent); the same environment writes as before."""
    config = make_bundle(tmp_path / "fen", name="fen.toml")
    folder = tmp_path / "net" / "fen"
    other = {"code": "0" * 64, "versions": library_versions()}
    outcome = batch._checked_site("fen", config, folder, client=other)
    assert outcome.status == "failed" and outcome.error == "WorkerMismatchError"
    assert "fluxpart code SHA-256" in outcome.message and "0" * 12 in outcome.message
    assert "Start every worker" in outcome.message
    assert not folder.exists() and not folder.parent.exists()
    assert batch._checked_site("fen", config, folder, client=client_environment()).status \
        == "written"


def test_a_library_version_that_differs_is_named_with_both_versions():
    """numpy of another version on a worker than on the client (one node's older
    environment): named with both versions; equal environments and a direct call (no
    client record) pass."""
    here = client_environment()
    theirs = {**here, "versions": {**here["versions"], "numpy": "0.0.1"}}
    error = mismatch_error(theirs)
    assert isinstance(error, WorkerMismatchError)
    text = str(error)
    assert f"numpy {here['versions']['numpy']} on the worker, 0.0.1 on the client" in text
    assert "fluxpart code" not in text
    assert mismatch_error(here) is None and mismatch_error(None) is None


def test_a_worker_of_another_patch_release_is_named_as_decided(tmp_path):
    """Decided in round review31 (README "batch"): a worker whose Python or PyArrow is
    another patch release than the client's fails its site too. The manifest records
    these versions and the rerun's up-to-date test compares them as written
    (``batch._stale_reason``), and PyArrow writes its own version into the footer of
    every Parquet file it writes ("created_by", Apache Parquet format specification,
    FileMetaData (m)), so a table of another PyArrow has other bytes and another
    SHA-256 in the manifest. Checked here on a table this library writes: its version
    is in the file's bytes."""
    import platform

    import pandas as pd
    import pyarrow

    table = tmp_path / "t.parquet"
    pd.DataFrame({"nee": [1.0, -2.5]}).to_parquet(table, engine="pyarrow")
    assert f"version {pyarrow.__version__}".encode() in table.read_bytes()
    here = client_environment()
    major, minor, patch = platform.python_version_tuple()
    other = f"{major}.{minor}.{int(''.join(c for c in patch if c.isdigit()) or 0) + 1}"
    for name, version in (("python", other), ("pyarrow", pyarrow.__version__ + ".post1")):
        theirs = {**here, "versions": {**here["versions"], name: version}}
        text = str(mismatch_error(theirs))
        assert f"{name} {here['versions'][name]} on the worker, {version} on the client" \
            in text
    assert mismatch_error(here) is None


def test_a_cluster_of_an_older_release_is_named_not_a_traceback():
    """A scheduler or worker whose fluxpart predates the check looks the task function
    up by name in its own ``fluxpart.batch`` (Dask pickles a function by reference (m);
    ``pickle`` raises AttributeError "Can't get attribute ..." for a missing name (Python
    documentation, pickle (m))), and Dask wraps that in RuntimeError "Error during
    deserialization of the task graph": measured with a scheduler and a worker of
    0.24.0, a 30-line traceback per site. It is now named as an older cluster; other
    errors are not."""
    import pickle

    try:
        # the reference as an older cluster resolves it: a module without the name
        # (both module names are 14 bytes, so the pickle's length fields still hold)
        pickle.loads(pickle.dumps(batch._checked_site).replace(
            b"fluxpart.batch", b"fluxpart.store"))
    except AttributeError as missing:
        try:
            raise RuntimeError("Error during deserialization of the task graph") \
                from missing
        except RuntimeError as wrapped:
            error = older_worker_error(wrapped)
    assert isinstance(error, WorkerMismatchError) and "older fluxpart" in str(error)
    assert older_worker_error(RuntimeError("Error during deserialization")) is None
    assert older_worker_error(AttributeError("'x' object has no attribute 'y'")) is None


def test_a_batch_names_each_site_of_a_mismatched_worker(tmp_path, monkeypatch):
    """Wiring: the client's record reaches every task of a real local cluster; with the
    client's record standing for other code (the workers run this code), each site fails
    by name, nothing is written in its folder, and the batch goes on to its network
    tables (exit 1)."""
    pytest.importorskip("distributed")
    for name in ("fen", "moor"):
        make_bundle(tmp_path / name, name=f"{name}.toml")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["fen/fen.toml", "moor/moor.toml"]\nout = "net"\n')
    monkeypatch.setattr(batch, "client_environment",
                        lambda: {"code": "f" * 64, "versions": library_versions()})
    report = batch.run_batch(sites, workers=1)
    assert report.failed == 2 and report.exit_code == 1
    assert {o.error for o in report.outcomes} == {"WorkerMismatchError"}
    assert not (tmp_path / "net" / "fen").exists() and not (tmp_path / "net" / "moor").exists()


# --------------------------------------------------------------------------- out of inodes

class _Statvfs:
    """A statvfs result with given inode and block counts (statvfs(3) fields)."""

    def __init__(self, files, favail, bavail, frsize=4096):
        self.f_files, self.f_favail, self.f_bavail, self.f_frsize = files, favail, bavail, frsize


def test_a_file_system_out_of_inodes_is_named_as_such(tmp_path, monkeypatch):
    """ENOSPC on a file system with space but no free inodes (a tmpfs of nr_inodes=12
    measured: 52.4 MB free) said "No space left on device" and nothing else (run), or
    "free space" / "choose a writable place" (report, exports), while ``df -h`` shows
    room. The remedy now names the inodes, their count and the free space; a file
    system whose space ran out keeps the plain remedy, and btrfs (``f_files`` 0, no
    fixed number) too."""
    monkeypatch.setattr(os, "statvfs", lambda path: _Statvfs(12, 0, 12_800))
    text = store.full_disk_remedy(tmp_path)
    assert "0 free inodes" in text and "of 12" in text and "df -i" in text
    assert "52.4 MB" in text
    monkeypatch.setattr(os, "statvfs", lambda path: _Statvfs(6_553_600, 6_000_000, 0))
    assert store.full_disk_remedy(tmp_path) == "free space, or choose another place"
    monkeypatch.setattr(os, "statvfs", lambda path: _Statvfs(0, 0, 12_800))
    assert store.full_disk_remedy(tmp_path, "x") == "x"
    assert "df -i" not in store.full_disk_remedy(tmp_path / "missing" / "deeper")


def test_run_into_a_file_system_out_of_inodes_says_so(tmp_path, monkeypatch, capsys):
    """Wiring: `run` whose probe file cannot be made (ENOSPC) on a file system without
    free inodes: one line naming the inodes, exit 2, nothing made."""
    import tempfile

    config = make_bundle(tmp_path / "site")

    def no_inode(*args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(tempfile, "TemporaryFile", no_inode)
    monkeypatch.setattr(os, "statvfs", lambda path: _Statvfs(12, 0, 12_800))
    out = tmp_path / "site" / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: --out "), err
    assert "free inodes" in err[0] and "df -i" in err[0]
    assert not out.exists()


# --------------------------------------------------------------------------- lock file link

def test_a_lock_file_that_is_a_symbolic_link_is_named_and_its_target_kept(
        tmp_path, capsys):
    """``.OUT.lock`` a symbolic link to a user's file (a tree copied with ``cp -s``, a
    link planted in a shared folder): filelock opens it with ``O_NOFOLLOW`` (ELOOP,
    open(2) (m)), so the target was safe, but the line said "Too many levels of symbolic
    links; choose a writable output folder". Now it names the link and its target and
    says to remove the link; the target's bytes are untouched (known truth)."""
    config = make_bundle(tmp_path / "site")
    precious = tmp_path / "notes.txt"
    precious.write_text("field notes\n")
    out = tmp_path / "site" / "out"
    (tmp_path / "site" / ".out.lock").symlink_to(precious)
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "is a symbolic link" in err[0], err
    assert str(precious) in err[0] and "remove the link" in err[0]
    assert precious.read_text() == "field notes\n"
    assert not out.exists()
    (tmp_path / "site" / ".out.lock").unlink()
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    assert Path(out / "manifest.json").is_file()


# --------------------------------------------------------------------------- several input files

def _two_file_bundle(folder: Path) -> Path:
    """A bundle whose input is two monthly files (a glob), split from one input."""
    config = make_bundle(folder)
    lines = (folder / "tower.csv").read_text().splitlines(keepends=True)
    half = 1 + (len(lines) - 1) // 2
    (folder / "tower_01.csv").write_text("".join(lines[:half]))
    (folder / "tower_02.csv").write_text("".join(lines[:1] + lines[half:]))
    (folder / "tower.csv").unlink()
    config.write_text(config.read_text().replace('path = "tower.csv"', 'path = "tower_*.csv"'))
    return config


def test_verify_locates_an_edit_in_one_of_several_input_files(tmp_path, capsys):
    """A result read from monthly files (a glob) whose second month was edited after the
    run: verify named the changed file only, "it is not the input file the result was
    computed from" (left alone by faults23), while a single input got the record, column
    and both values. All the files as they are now are read together as the run read
    them and compared with the input values the result holds (known truth: one NEE
    value typed over, 0.5 units more than the run read)."""
    import pandas as pd

    config = _two_file_bundle(tmp_path / "site")
    out = tmp_path / "site" / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    capsys.readouterr()
    second = tmp_path / "site" / "tower_02.csv"
    lines = second.read_text().splitlines(keepends=True)
    column = lines[0].split(",").index("co2_exchange")
    row = next(n for n in range(5, len(lines)) if lines[n].split(",")[column] != "-9999")
    cells = lines[row].split(",")
    then = float(cells[column])
    cells[column] = f"{then + 0.5:.3f}"
    lines[row] = ",".join(cells)
    second.write_text("".join(lines))
    assert main(["verify", str(out)]) == 1
    text = capsys.readouterr().out
    assert "tower_02.csv" in text and "1 value(s) in 1 record(s) differ" in text
    stamp = (pd.Timestamp(lines[row].split(",")[0]) - pd.Timedelta("30min")).strftime(
        "%Y-%m-%d %H:%M")     # stamp_end marks the interval's end: it starts 30 min before
    written = pd.Timestamp(lines[row].split(",")[0]).strftime("%Y-%m-%d %H:%M")
    # the record by its interval start, and the stamp the file writes for it (review46)
    assert f"record starting {stamp}, stamped {written} in the file (the interval's end), " \
        "'co2_exchange'" in text
    assert f"{then:.10g} then, {then + 0.5:.10g} now" in text


def test_verify_of_several_files_with_one_missing_names_the_first_change(tmp_path, capsys):
    """The first monthly file edited and the second moved away: the edit cannot be read
    in the whole input, so the changed file is named alone as before (exit 1), not
    refused for the missing one."""
    config = _two_file_bundle(tmp_path / "site")
    out = tmp_path / "site" / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    capsys.readouterr()
    first = tmp_path / "site" / "tower_01.csv"
    lines = first.read_text().splitlines(keepends=True)
    lines[3] = lines[3].replace(",", ",1", 1)         # one cell typed over
    first.write_text("".join(lines))
    (tmp_path / "site" / "tower_02.csv").rename(tmp_path / "moved.csv")
    assert main(["verify", str(out)]) == 1
    text = capsys.readouterr().out
    assert "tower_01.csv" in text and "not the input file the result was computed from" in text
    assert "differ (" not in text


# --------------------------------------------------------------------------- Dask scratch

def test_a_missing_dask_scratch_folder_is_named_before_the_cluster_starts(
        tmp_path, capsys):
    """``DASK_TEMPORARY_DIRECTORY`` (Dask's ``temporary-directory`` key, Dask
    documentation "Configuration" (m)) naming a folder this node lacks: every local
    worker failed to make its scratch space and the batch said "could not start ...
    give fewer --workers, or raise the limit that ran out (ulimit -n, ulimit -u)".
    Now the setting and the folder are named before a cluster starts, one line, exit
    2, no site computed; a usable folder (or none set) passes."""
    import dask

    from fluxpart.worker_match import scratch_folder_problem

    make_bundle(tmp_path / "fen", name="fen.toml")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["fen/fen.toml"]\nout = "net"\n')
    missing = tmp_path / "scratch-on-another-node"
    with dask.config.set({"temporary-directory": str(missing)}):
        assert main(["batch", str(sites), "--workers", "1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "temporary-directory" in err[0] and str(missing) in err[0], err
    assert "does not exist" in err[0] and "ulimit" not in err[0]
    assert not (tmp_path / "net" / "fen").exists()
    assert "not a folder" in scratch_folder_problem(sites)
    assert scratch_folder_problem(tmp_path) is None and scratch_folder_problem(None) is None


# --------------------------------------------------------------------------- pipes

@pytest.mark.parametrize("command", [["verify", "{pipe}"], ["report", "{pipe}"],
                                     ["export", "{pipe}", "--csv", "{tmp}/csv"],
                                     ["diff", "{pipe}", "{out}"],
                                     ["export", "{out}", "--netcdf", "{pipe}"]])
def test_a_named_pipe_given_as_a_result_or_netcdf_target_is_refused_not_waited_on(
        command, bundle, tmp_path, capsys):
    """A named pipe nobody writes given as the result folder (a leftover `mkfifo`, a
    process substitution whose writer ended) or as ``--netcdf`` (``--netcdf /dev/stdout
    | ...``): the first bytes were read to tell an archive or a NetCDF file fluxpart
    wrote, and opening a FIFO for reading blocks until a writer comes (fifo(7) (m)):
    `verify`, `report`, `export` and `diff` waited without end (measured: stopped by
    `timeout` after 20 s). Now one line naming the pipe, exit 2, nothing written (known
    truth: the pipe stays a pipe)."""
    import stat
    import threading

    pipe = tmp_path / "result"
    os.mkfifo(pipe)
    argv = [part.format(pipe=pipe, tmp=tmp_path, out=bundle / "out") for part in command]
    codes = []
    worker = threading.Thread(target=lambda: codes.append(main(argv)), daemon=True)
    worker.start()
    worker.join(60)
    if worker.is_alive():                 # release the blocked open before failing
        with open(pipe, "wb"):
            pass
        pytest.fail(f"{argv[0]} waited on the pipe")
    assert codes == [2]
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "is a named pipe" in err[0], err
    assert stat.S_ISFIFO(os.stat(pipe).st_mode) and not (tmp_path / "csv").exists()


# --------------------------------------------------------------------------- Unicode forms

def test_an_input_named_in_the_other_unicode_form_is_named_with_the_fix(tmp_path, capsys):
    """A bundle copied through a Mac keeps ``grün.csv`` decomposed (NFD: ``u`` and a
    combining diaeresis, Unicode Annex #15 (m)); the config, typed on Linux, says
    ``grün.csv`` composed (NFC). Linux tells the two apart, so `run` said only "input
    file 'grün.csv' does not exist" beside a file that looks identical (verify already
    looks for the other form, faults18). Now the line names the entry in the other form
    and the fix; nothing is read from it and nothing written. A batch's site listed in
    a folder so copied is named likewise."""
    import unicodedata

    config = make_bundle(tmp_path / "site")
    composed = unicodedata.normalize("NFC", "grün.csv")
    decomposed = unicodedata.normalize("NFD", composed)
    assert composed != decomposed                 # one code point against two
    (tmp_path / "site" / "tower.csv").rename(tmp_path / "site" / decomposed)
    config.write_text(config.read_text().replace('path = "tower.csv"',
                                                 f'path = "{composed}"'))
    out = tmp_path / "site" / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "does not exist" in err[0], err
    assert repr(decomposed) in err[0] and "another Unicode form (NFD" in err[0]
    assert not out.exists()

    folder = tmp_path / unicodedata.normalize("NFD", "Étang")
    make_bundle(folder, name="fen.toml")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["' + unicodedata.normalize("NFC", "Étang")
                     + '/fen.toml"]\nout = "net"\n', encoding="utf-8")
    assert main(["batch", str(sites)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "no such file" in err[0] and repr(folder.name) in err[0], err


# --------------------------------------------------------------------------- MPLBACKEND

def test_report_ignores_a_backend_matplotlib_refuses(copy):
    """``MPLBACKEND`` inherited from a notebook (``!fluxpart report`` in Jupyter sets it
    to ``module://matplotlib_inline.backend_inline``) or mistyped: matplotlib validates
    it when imported and raised ValueError, so `report` ended in a traceback (exit 1),
    though its figures use the Agg canvas, no backend (matplotlib documentation,
    "Backends" (m)). A fresh process (matplotlib not yet imported) now draws the same
    page and figures as without the variable."""
    import hashlib
    import subprocess
    import sys

    def report(**extra):
        environment = {key: value for key, value in os.environ.items()
                       if key != "MPLBACKEND"}
        environment.update(PYTHONPATH=str(Path(__file__).resolve().parent.parent), **extra)
        done = subprocess.run([sys.executable, "-m", "fluxpart", "report",
                               str(copy / "out")], env=environment, capture_output=True,
                              text=True, timeout=600)
        folder = copy / "out" / "report"
        return done.returncode, done.stderr, {
            p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in folder.iterdir()}

    code, _, plain = report()
    assert code == 0
    code, err, refused = report(MPLBACKEND="no_such_backend")
    assert code == 0 and "Traceback" not in err, err
    assert refused == plain
