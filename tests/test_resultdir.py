"""A result folder is replaced as a whole or not at all, by one writer at a time.

The kill test sends SIGKILL (POSIX) to real ``fluxpart run`` processes at varied moments
of writing into a folder that holds an earlier result; after every kill the folder must
be the old complete result or the new complete one, each matching its manifest. The
reference for "complete" is the byte content of a run that was not interrupted
(SHA-256 from Python's ``hashlib`` via the manifest).
"""

import dataclasses
import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pandas as pd
import pytest
from bundles import make_bundle

import fluxpart
from fluxpart import resultdir
from fluxpart.errors import InputFileError, OutputError
from fluxpart.pipeline import process_site_config
from fluxpart.resultdir import clean_leftovers, folder_lock, read_folder

REPOSITORY = Path(__file__).resolve().parent.parent


def _run(config: Path, out: Path) -> subprocess.Popen:
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(REPOSITORY), *filter(None, [os.environ.get("PYTHONPATH")])])}
    return subprocess.Popen([sys.executable, "-m", "fluxpart", "run", str(config), "--out",
                             str(out), "--quiet"], env=env, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE)


def _leftovers(out: Path) -> list[str]:
    return sorted(p.name for p in out.parent.iterdir()
                  if p.name.startswith(f".{out.name}.") and p.is_dir())


def _table_hashes(manifest: dict) -> dict:
    return {name: entry["sha256"] for name, entry in manifest["tables"].items()}


@pytest.fixture(scope="module")
def two_configs(tmp_path_factory):
    """Two site configs of one input that give different results, and their reference hashes."""
    root = tmp_path_factory.mktemp("kill")
    configs = {draws: make_bundle(root, records=24 * 2 * 30, name=f"site{draws}.toml",
                                  draws=draws)
               for draws in (30, 31)}
    references = {}
    for draws, config in configs.items():
        folder = process_site_config(config).write(root / f"reference{draws}")
        references[draws] = _table_hashes(read_folder(folder)[0])
    assert references[30] != references[31]
    return root, configs, references


def _check_complete(out: Path, references: dict) -> int:
    """The folder matches its manifest and is byte for byte one of the references."""
    manifest, _ = read_folder(out)
    draws = manifest["config"]["random_error_draws"]
    assert _table_hashes(manifest) == references[draws]
    return draws


def test_sigkill_while_writing_leaves_the_old_or_the_new_result(two_configs, tmp_path):
    """SIGKILL at varied moments of writing: the folder is always one complete result."""
    root, configs, references = two_configs
    out = tmp_path / "out"
    assert _run(configs[30], out).wait(timeout=120) == 0
    current = _check_complete(out, references)
    # (what to wait for, extra delay [s]): the staging folder appearing, its manifest
    # appearing (the moment just before the swap), or nothing (killed while computing)
    moments = [("staging", 0.0), ("staging", 0.004), ("staging", 0.015), ("staging", 0.05),
               ("manifest", 0.0), ("manifest", 0.001), ("manifest", 0.005), ("start", 0.5)]
    seen_staging, outcomes = 0, []
    for wait_for, delay in moments:
        other = 31 if current == 30 else 30
        process = _run(configs[other], out)
        deadline = time.monotonic() + 120
        seen = False
        while process.poll() is None and time.monotonic() < deadline and wait_for != "start":
            staging = [p for p in out.parent.glob(f".{out.name}.staging-*") if p.is_dir()]
            if staging and (wait_for == "staging" or any((p / "manifest.json").exists()
                                                         for p in staging)):
                seen = True
                break
            time.sleep(0.0005)
        time.sleep(delay)
        process.send_signal(signal.SIGKILL)
        process.wait(timeout=30)
        seen_staging += seen
        now = _check_complete(out, references)
        assert now in (current, other)
        outcomes.append((wait_for, delay, process.returncode, "new" if now == other else "old"))
        current = now
    assert seen_staging >= 5, outcomes          # the kills did land while writing
    # the next run cleans what the killed ones left beside the folder
    assert _run(configs[30], out).wait(timeout=120) == 0
    assert _check_complete(out, references) == 30
    assert _leftovers(out) == []


def test_two_writers_at_once_give_one_complete_result(two_configs, tmp_path):
    """Two `fluxpart run` into one folder at once: both succeed, one whole result remains."""
    root, configs, references = two_configs
    out = tmp_path / "out"
    first, second = _run(configs[30], out), _run(configs[31], out)
    assert first.wait(timeout=180) == 0, first.stderr.read()
    assert second.wait(timeout=180) == 0, second.stderr.read()
    _check_complete(out, references)
    assert _leftovers(out) == []
    # the platform a `fluxpart run` process records is the one this process sees
    from fluxpart.fingerprint import platform_differences, platform_record

    assert platform_differences(read_folder(out)[0]["platform"], platform_record()) == []


@pytest.fixture(scope="module")
def short_result(tmp_path_factory):
    root = tmp_path_factory.mktemp("short")
    return process_site_config(make_bundle(root))


def test_second_writer_waits_says_so_or_gives_up(short_result, tmp_path):
    """A held lock: refused at once with timeout 0, waited for (with a note) otherwise."""
    out = tmp_path / "out"
    with folder_lock(out):
        with pytest.raises(OutputError, match="being written by another fluxpart process"):
            resultdir.write_folder(out, {}, site={}, config={}, seed=0, provenance={},
                                   lock_timeout=0)
        said = []
        with pytest.raises(OutputError, match="gave up after 0.2 s"):
            resultdir.write_folder(
                out, short_result.tables(), site=short_result.site.to_dict(),
                config=short_result.config.to_dict(), seed=0, provenance={},
                lock_timeout=0.2, notify=said.append)
        assert said and "waiting" in said[0]
    assert not out.exists() and _leftovers(out) == []

    holder = folder_lock(out)
    holder.__enter__()
    releaser = threading.Timer(0.5, holder.__exit__, args=(None, None, None))
    releaser.start()
    started = time.monotonic()
    short_result.write(out, lock_timeout=60)
    assert time.monotonic() - started >= 0.4
    releaser.join()
    pd.testing.assert_frame_equal(fluxpart.load(out).annual, short_result.annual,
                                  check_dtype=False)


def test_successful_write_leaves_no_lock_file(short_result, tmp_path):
    """After a successful write the empty .OUT.lock file is gone (robustness leftover 4: it
    stayed beside every result folder); a lock held only for reading leaves it alone."""
    out = tmp_path / "out"
    short_result.write(out)
    assert not resultdir.lock_file(out).exists()
    short_result.write(out)                      # a rerun into the same folder, same again
    assert not resultdir.lock_file(out).exists()
    with folder_lock(out):
        pass
    assert resultdir.lock_file(out).exists()


def test_lock_without_stable_inodes_is_kept_not_looped(tmp_path, monkeypatch):
    """Where the lock file's name never compares equal to the locked file (a file system
    without stable inode numbers), the lock is held after a few tries and the file kept."""
    monkeypatch.setattr(resultdir, "_names_locked_file", lambda path, locked: False)
    out = tmp_path / "out"
    with folder_lock(out, remove=True):
        assert resultdir.lock_file(out).exists()
    assert resultdir.lock_file(out).exists()


_WAITER = """
import sys, time
from pathlib import Path
from fluxpart.resultdir import folder_lock
out, flag = Path(sys.argv[1]), Path(sys.argv[2])
with folder_lock(out, timeout=60, notify=lambda text: flag.with_suffix(".waiting").touch()):
    flag.touch()
    time.sleep(3.0)
"""


@pytest.mark.skipif(os.name != "posix", reason="flock semantics of POSIX")
def test_removing_the_lock_file_keeps_writers_apart(tmp_path):
    """The classic race of deleting a lock file: a writer waiting on the old file must not
    hold the lock together with a newcomer who creates a new file under the same name.
    Here the holder deletes the file while a second process waits; once that process holds
    the lock, a third writer is still refused (mutual exclusion, the lock's only job)."""
    out, flag = tmp_path / "out", tmp_path / "holds"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(REPOSITORY), *filter(None, [os.environ.get("PYTHONPATH")])])}
    with folder_lock(out, remove=True):
        waiter = subprocess.Popen([sys.executable, "-c", _WAITER, str(out), str(flag)], env=env)
        deadline = time.monotonic() + 60
        while not flag.with_suffix(".waiting").exists() and time.monotonic() < deadline:
            time.sleep(0.05)
        assert flag.with_suffix(".waiting").exists(), "the second process never waited"
        time.sleep(0.2)                           # it is now blocked on the old lock file
    assert not resultdir.lock_file(out).exists() or waiter.poll() is None
    while not flag.exists() and time.monotonic() < deadline:
        time.sleep(0.02)
    assert flag.exists() and waiter.poll() is None, "the waiting process did not take the lock"
    with pytest.raises(OutputError, match="being written by another fluxpart process"):
        with folder_lock(out, timeout=0):
            pass
    assert waiter.wait(timeout=60) == 0


def test_rerun_with_fewer_tables_leaves_no_stale_table(short_result, tmp_path):
    """The folder is replaced whole: a table the new result lacks does not survive."""
    out = short_result.write(tmp_path / "out")
    assert (out / "parameters_daytime.parquet").exists()
    # _computed=None: planted as computed (Result.write refuses a replace since mistakes39)
    fewer = dataclasses.replace(short_result, parameters={
        k: v for k, v in short_result.parameters.items() if k != "daytime"}, _computed=None)
    fewer.write(out)
    assert not (out / "parameters_daytime.parquet").exists()
    assert "daytime" not in fluxpart.load(out).parameters


def test_failed_write_keeps_the_old_result(short_result, tmp_path, monkeypatch):
    """A write that fails half-way (disk full) leaves the earlier result and no staging."""
    out = short_result.write(tmp_path / "out")
    before = read_folder(out)[0]
    calls = []

    def failing(frame, path, units, name):
        calls.append(name)
        if len(calls) == 3:
            raise OSError(28, "No space left on device")
        return real(frame, path, units, name)

    real = resultdir.write_table
    monkeypatch.setattr(resultdir, "write_table", failing)
    with pytest.raises(OutputError, match="No space left on device.*earlier result"):
        short_result.write(out)
    assert read_folder(out)[0] == before and _leftovers(out) == []


def test_crash_between_the_two_renames_is_repaired(short_result, tmp_path, monkeypatch):
    """Without an atomic exchange, a crash between the renames leaves the old result aside;
    the next reader puts it back and the next writer cleans up."""
    monkeypatch.setattr(resultdir, "_exchange", lambda a, b: False)
    out = short_result.write(tmp_path / "out")
    before = read_folder(out)[0]
    out.rename(out.parent / f".{out.name}.retired-deadbeef")            # the first rename
    (out.parent / f".{out.name}.staging-deadbeef").mkdir()               # a half-written new one
    from fluxpart.verify import verify

    with pytest.raises(InputFileError):       # a tool that does not repair finds nothing ...
        resultdir.read_manifest(out)
    assert verify(out).identical                                     # ... verify repairs it
    out.rename(out.parent / f".{out.name}.retired-deadbeef")
    assert fluxpart.load(out).site == short_result.site              # so does load
    assert read_folder(out)[0] == before and _leftovers(out) == []
    short_result.write(out)                                          # the fallback swap works
    assert read_folder(out)[0]["tables"] == before["tables"]
    assert clean_leftovers(out) == []


def test_out_that_is_a_file_or_a_foreign_folder_is_refused(short_result, tmp_path):
    """A file, or a folder with other files and no manifest, is never replaced."""
    target = tmp_path / "notes.txt"
    target.write_text("keep me")
    with pytest.raises(OutputError, match="exists and is not a folder"):
        short_result.write(target)
    assert target.read_text() == "keep me"
    folder = tmp_path / "documents"
    folder.mkdir()
    (folder / "thesis.tex").write_text("keep me too")
    with pytest.raises(OutputError, match="not a fluxpart result folder"):
        short_result.write(folder)
    assert (folder / "thesis.tex").read_text() == "keep me too"
    assert _leftovers(target) == [] and _leftovers(folder) == []


def test_result_of_another_site_is_not_replaced(short_result, tmp_path):
    """One --out for two sites: the second site's write is refused, the first result kept.

    It replaced the first site's result without a word before.
    """
    out = tmp_path / "out"
    short_result.write(out)
    before = read_folder(out)[0]
    other = dataclasses.replace(short_result, site=dataclasses.replace(
        short_result.site, name="Another tower"), _computed=None)     # planted as computed
    with pytest.raises(OutputError, match="holds the result of site .*not of 'Another tower'"
                       ) as refused:
        other.write(out)
    # its fix named once (it ended "...; choose another --out" twice; review round seven),
    # in words that fit a Python caller too (Result.write's folder; since 0.28.0)
    assert str(refused.value).count("choose another") == 1
    assert "Result.write" in str(refused.value)
    assert read_folder(out)[0]["seal"] == before["seal"]
    assert _leftovers(out) == []
    short_result.write(out)                                     # the same site: replaced
    assert read_folder(out)[0]["tables"] == before["tables"]


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="needs POSIX permissions that apply (not root)")
def test_unwritable_place_fails_cleanly(short_result, tmp_path):
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    try:
        with pytest.raises(OutputError):
            short_result.write(locked / "out")
    finally:
        locked.chmod(0o700)


def test_load_refuses_a_folder_that_does_not_match_its_manifest(short_result, tmp_path):
    """An extra file is named; so is a table whose bytes changed."""
    out = short_result.write(tmp_path / "out")
    (out / "notes.txt").write_text("added later")
    with pytest.raises(InputFileError, match="notes.txt is not listed in the manifest"):
        fluxpart.load(out)
    (out / "notes.txt").unlink()
    (out / "report").mkdir()                      # report pages: a folder the manifest names
    (out / "report" / "report.html").write_text("<html></html>")
    fluxpart.load(out)
    with open(out / "daily.parquet", "ab") as handle:
        handle.write(b"\0")
    with pytest.raises(InputFileError, match="daily.parquet has SHA-256"):
        fluxpart.load(out)


def test_staging_left_by_an_earlier_version_is_removed(short_result, tmp_path):
    """A `.out.xxxxxxxx` staging folder of tables left by fluxpart 0.1 goes; others stay."""
    old = tmp_path / ".out.k3j2h1g0"
    old.mkdir()
    (old / "daily.parquet").write_bytes(b"PAR1")
    mine = tmp_path / ".out.notes123"
    mine.mkdir()
    (mine / "notes.txt").write_text("not a table")
    short_result.write(tmp_path / "out")
    assert not old.exists() and (mine / "notes.txt").exists()


def test_platform_record_does_not_depend_on_importing_scipy():
    """The BLAS record is the same whether or not scipy.linalg was imported before
    (the record loads SciPy's BLAS itself; threadpoolctl lists loaded libraries)."""
    script = ("import json, sys\n"
              "from fluxpart.fingerprint import platform_record\n"
              "first = platform_record()\n"
              "assert 'scipy.linalg' not in sys.modules\n"
              "import scipy.linalg\n"
              "print(json.dumps([first, platform_record()], sort_keys=True))\n")
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                          check=True)
    import json

    first, second = json.loads(done.stdout)
    assert first == second
    assert any(entry["user_api"] == "blas" for entry in first["blas"])


def test_run_waits_for_a_folder_locked_before_it_starts(tmp_path, capsys):
    """``fluxpart run`` holds the folder's lock from its start, not only while writing:
    a second run into the same --out waits for the first, saying so on stderr, instead of
    computing alongside and replacing its result unseen (review, 0.12.0: the run that
    finished last won, the other operator's result was lost without notice)."""
    from fluxpart.cli import main

    config = make_bundle(tmp_path)
    out = tmp_path / "out"
    holder = folder_lock(out)
    holder.__enter__()
    releaser = threading.Timer(1.0, holder.__exit__, args=(None, None, None))
    releaser.start()
    started = time.monotonic()
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    waited = time.monotonic() - started
    releaser.join()
    assert "waiting" in capsys.readouterr().err
    assert waited >= 0.9
    assert fluxpart.load(out).annual.shape[0] >= 1


# --------------------------------------------------------------------------- unreadable or forged


def _reseal(folder: Path, table: str) -> None:
    """Forge the manifest after a table was edited: its SHA-256 and the seal recomputed
    (both are public functions; only the rerun of verify can catch this in general)."""
    import hashlib
    import json

    from fluxpart.manifest import manifest_bytes, manifest_seal

    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    entry = manifest["tables"][table]
    entry["sha256"] = hashlib.sha256((folder / entry["file"]).read_bytes()).hexdigest()
    manifest["seal"] = manifest_seal({k: v for k, v in manifest.items() if k != "seal"})
    (folder / "manifest.json").write_bytes(manifest_bytes(manifest))


def _commands(folder: Path, intact: Path, tmp_path: Path) -> dict:
    return {"verify": ["verify", str(folder), "--quiet"],
            "diff": ["diff", str(intact), str(folder)],
            "report": ["report", str(folder), "--out", str(tmp_path / "page"), "--quiet"],
            "export": ["export", str(folder), "--netcdf", str(tmp_path / "x.nc")]}


def _one_error_line(capsys, *names) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:"), err
    assert all(name in err[0] for name in names), err[0]
    return err[0]


@pytest.mark.parametrize("command", ["verify", "diff", "report", "export", "load"])
@pytest.mark.parametrize("which", ["ustar.parquet", "manifest.json"])
def test_a_result_file_that_cannot_be_read_is_one_error_line(short_result, tmp_path,
                                                             monkeypatch, capsys, command,
                                                             which):
    """Permission denied on a table or the manifest: exit 2 (bad input), never 1 (for verify
    "not reproduced") or a traceback, in every command that reads a result folder (review)."""
    import builtins
    import pathlib

    from fluxpart.cli import main

    if command in ("report", "export"):
        pytest.importorskip("matplotlib" if command == "report" else "h5netcdf")
    intact = short_result.write(tmp_path / "intact")
    folder = short_result.write(tmp_path / "denied")
    target = str(folder / which)
    denied = PermissionError(13, "Permission denied", target)
    real_open, real_read_text = builtins.open, pathlib.Path.read_text
    real_read_bytes = pathlib.Path.read_bytes

    def guarded_open(file, *args, **kwargs):
        if os.fspath(file) == target:
            raise denied
        return real_open(file, *args, **kwargs)

    def guarded_read_text(self, *args, **kwargs):
        if str(self) == target:
            raise denied
        return real_read_text(self, *args, **kwargs)

    def guarded_read_bytes(self):       # the manifest is read as bytes (its encoding told)
        if str(self) == target:
            raise denied
        return real_read_bytes(self)

    monkeypatch.setattr(builtins, "open", guarded_open)
    monkeypatch.setattr(pathlib.Path, "read_text", guarded_read_text)
    monkeypatch.setattr(pathlib.Path, "read_bytes", guarded_read_bytes)
    if command == "load":
        with pytest.raises(InputFileError, match=f"{which}' cannot be read: Permission denied"):
            fluxpart.load(folder)
        return
    assert main(_commands(folder, intact, tmp_path)[command]) == 2
    _one_error_line(capsys, which, "cannot be read", "Permission denied")


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="needs POSIX permissions that apply (not root)")
@pytest.mark.parametrize("mode", ["table", "folder"])
def test_chmod_000_is_one_error_line(short_result, tmp_path, capsys, mode):
    """The same with real permissions: a table or the whole folder made unreadable."""
    from fluxpart.cli import main

    folder = short_result.write(tmp_path / "denied")
    locked = folder / "ustar.parquet" if mode == "table" else folder
    locked.chmod(0)
    try:
        assert main(["verify", str(folder), "--quiet"]) == 2
        _one_error_line(capsys, "cannot be read")
    finally:
        locked.chmod(0o755)


@pytest.mark.parametrize("damage", ["row", "column", "cut"])
def test_a_forged_table_is_named_by_every_reader(short_result, tmp_path, capsys, damage):
    """A table edited and its hash forged into the resealed manifest: the manifest's rows and
    columns (or the Parquet footer) name it in diff, report and load, one error line, exit 2,
    no ArrowInvalid or KeyError traceback (review)."""
    import pyarrow.parquet as pq

    from fluxpart.cli import main

    intact = short_result.write(tmp_path / "intact")
    folder = short_result.write(tmp_path / "forged")
    path = folder / "annual.parquet"
    table = pq.read_table(path)
    if damage == "row":
        pq.write_table(table.slice(1), path)
        said = "has 0 rows, not the 1 recorded" if table.num_rows == 1 else "rows, not the"
    elif damage == "column":
        pq.write_table(table.drop(["nee"]), path)
        said = "lacks column(s) 'nee'"
    else:
        path.write_bytes(path.read_bytes()[:200])
        said = "is not a readable Parquet file"
    _reseal(folder, "annual")
    with pytest.raises(InputFileError, match="annual.parquet"):
        fluxpart.load(folder)
    for command in ("diff", "report"):
        if command == "report":
            pytest.importorskip("matplotlib")
        assert main(_commands(folder, intact, tmp_path)[command]) == 2
        _one_error_line(capsys, "annual.parquet", said)
    assert resultdir.check_folder(intact, read_folder(intact)[0]) == []


def test_failed_or_interrupted_block_leaves_no_lock_file(tmp_path):
    """The lock file goes when the block ends with an error or Ctrl-C too (review: a report
    stopped with Ctrl-C left `.DIR.lock`)."""
    out = tmp_path / "out"
    for error in (OutputError("disk full"), KeyboardInterrupt()):
        with pytest.raises(type(error)), folder_lock(out, remove=True):
            assert resultdir.lock_file(out).exists()
            raise error
        assert not resultdir.lock_file(out).exists()


def test_write_protected_result_is_refused_not_left_hidden(short_result, tmp_path, monkeypatch):
    """A result folder made read-only (chmod -R a-w, to keep it) sits in a writable parent:
    the swap succeeded, the old result could not be removed (deleting a file needs write
    permission on its folder, POSIX unlink) and stayed as a hidden `.OUT.staging-*` folder
    that no later run removed either (review, round six). It is refused before writing and
    left as it was. Root may write anywhere, so as root os.access is replaced by the owner's
    permission bits, the check an ordinary user's process gets."""
    out = tmp_path / "out"
    short_result.write(out)
    before = read_folder(out)[0]["seal"]
    (out).chmod(0o555)
    if os.geteuid() == 0:
        monkeypatch.setattr(resultdir.os, "access",
                            lambda path, mode: os.stat(path).st_mode & 0o200 != 0)
    try:
        with pytest.raises(OutputError, match="is write-protected .*chmod -R u\\+w"):
            short_result.write(out)
        assert read_folder(out)[0]["seal"] == before
        assert _leftovers(out) == []
    finally:
        out.chmod(0o755)
    monkeypatch.undo()
    short_result.write(out)                         # writable again: replaced, nothing left
    assert _leftovers(out) == []


def test_result_folder_holding_unlisted_files_is_not_replaced(short_result, tmp_path):
    """An input file (or the site config, or notes) moved into an earlier result folder:
    the next run replaced the folder whole and deleted the input without a word (review,
    round six). Refused, naming the file, and nothing is changed; hidden entries (a file
    manager's) do not count."""
    out = tmp_path / "out"
    short_result.write(out)
    before = read_folder(out)[0]["seal"]
    (out / "tower.csv").write_text("time,nee\n")
    with pytest.raises(OutputError, match="holds 'tower.csv', which fluxpart did not write "
                                          "there.*delete them"):
        short_result.write(out)
    assert (out / "tower.csv").read_text() == "time,nee\n"
    assert _leftovers(out) == []
    (out / "tower.csv").unlink()
    assert read_folder(out)[0]["seal"] == before
    (out / ".DS_Store").write_text("")
    short_result.write(out)


def test_a_folder_with_another_programs_manifest_is_named_as_not_a_result(tmp_path):
    """A folder holding another program's manifest.json (JSON, but none of a fluxpart
    manifest's seal, format and tables) was "manifest.json has no seal ... (and 3 more
    problem(s); fluxpart verify lists them)", while verify listed none of them; it is
    named as not a result folder (review round seven)."""
    import json

    import fluxpart

    (tmp_path / "manifest.json").write_text(json.dumps({"name": "web-app", "version": 2}))
    with pytest.raises(InputFileError, match=r"manifest\.json is not a fluxpart manifest "
                       r"\(it has no seal, format or tables\): the folder is not a fluxpart "
                       r"result folder$"):
        fluxpart.load(tmp_path)


def test_a_damaged_manifest_protects_the_files_a_user_put_beside_it(short_result, tmp_path):
    """A result folder whose manifest.json was cut short (a copy stopped mid-file), holding
    an input file and notes moved into it: `run --out` into it replaced the folder whole
    and deleted both (review round thirteen), although a folder holding files its manifest
    does not list is refused (README "Output folder"). Where the manifest cannot be read,
    the names a run writes stand in for its list: the user's files refuse the write, and
    without them the damaged folder is rewritten whole, as before."""
    out = tmp_path / "out"
    short_result.write(out)
    manifest = out / "manifest.json"
    manifest.write_bytes(manifest.read_bytes()[:500])
    (out / "tower.csv").write_text("stamp,nee\n")
    (out / "notes.txt").write_text("keep me")
    with pytest.raises(OutputError, match="holds 'notes.txt', 'tower.csv', which fluxpart "
                                          "did not write there"):
        short_result.write(out)
    assert (out / "notes.txt").read_text() == "keep me"
    assert (out / "tower.csv").read_text() == "stamp,nee\n"
    assert manifest.stat().st_size == 500 and _leftovers(out) == []
    (out / "tower.csv").unlink()
    (out / "notes.txt").unlink()
    short_result.write(out)
    assert read_folder(out)[0]["tables"] == read_folder(short_result.write(tmp_path / "b"))[0][
        "tables"]


def test_a_mount_point_as_the_output_folder_is_refused_naming_a_folder_inside(
        short_result, tmp_path, monkeypatch):
    """A mount point (a container's volume `-v host:/out`, a mounted drive) cannot be
    renamed (rename(2): EBUSY, "the directory is in use ... as a mount point"), so the swap
    failed with "Device or resource busy" after the whole computation, no fix named. A
    mount point seen by os.path.ismount is refused before writing; a bind mount within one
    file system, which ismount does not see, is named from the swap's EBUSY; both name a
    folder inside it, and nothing is left beside it."""
    import errno

    out = tmp_path / "volume"
    out.mkdir()
    real_ismount = os.path.ismount
    monkeypatch.setattr(os.path, "ismount", lambda path: Path(path) == out or real_ismount(path))
    with pytest.raises(OutputError, match="is a mount point.*give a folder inside it, e.g. "
                       f"'{out / 'result'}'"):
        short_result.write(out)
    assert list(out.iterdir()) == [] and _leftovers(out) == []
    monkeypatch.setattr(os.path, "ismount", real_ismount)

    def busy(first, second):
        raise OSError(errno.EBUSY, os.strerror(errno.EBUSY), str(second))

    monkeypatch.setattr(resultdir, "_exchange", busy)
    with pytest.raises(OutputError, match="is a mount point"):
        short_result.write(out)
    assert list(out.iterdir()) == [] and _leftovers(out) == []
    written = short_result.write(out / "result")        # the folder named works
    manifest, tables = read_folder(written)
    assert sorted(tables) == sorted(manifest["tables"]) and "annual" in tables


def test_a_users_hidden_files_in_a_result_folder_are_not_deleted(short_result, tmp_path):
    """A `.git` folder (results tracked where they lie) or R's `.RData` workspace (R saves
    it in the folder it ran in, R documentation of `save.image` (m)) inside a result
    folder: the next run replaced the folder whole and deleted them without a word, hidden
    entries not being counted. They now refuse the write, named, nothing changed; what
    Finder (`.DS_Store`, AppleDouble `._*`), Dolphin (`.directory`) and an interrupted
    report leave still does not."""
    out = tmp_path / "out"
    short_result.write(out)
    (out / ".git").mkdir()
    (out / ".git" / "HEAD").write_text("ref: refs/heads/main\n")
    (out / ".RData").write_bytes(b"RDX3\n")
    with pytest.raises(OutputError, match=r"holds '\.RData', '\.git', which fluxpart did not "
                                          "write there"):
        short_result.write(out)
    assert (out / ".git" / "HEAD").read_text() == "ref: refs/heads/main\n"
    assert (out / ".RData").read_bytes() == b"RDX3\n" and _leftovers(out) == []
    (out / ".RData").unlink()
    (out / ".git" / "HEAD").unlink()
    (out / ".git").rmdir()
    for name in (".DS_Store", "._annual.parquet", ".directory"):
        (out / name).write_text("")
    (out / ".report.staging-k1ll3d00").mkdir()
    short_result.write(out)
    assert not (out / ".DS_Store").exists()         # replaced whole, as before


def test_a_result_on_a_read_only_mount_names_the_mount_not_chmod(short_result, tmp_path,
                                                                 monkeypatch):
    """A result folder on a file system mounted read-only (statvfs ST_RDONLY, POSIX) was
    called write-protected with the fix `chmod -R u+w`, which a read-only mount refuses
    too. It is now named as on a read-only mount; nothing is changed."""
    out = short_result.write(tmp_path / "out")
    before = read_folder(out)[0]["seal"]
    real_statvfs = os.statvfs

    class ReadOnly:
        def __init__(self, status):
            self._status = status
            self.f_flag = status.f_flag | os.ST_RDONLY

        def __getattr__(self, name):
            return getattr(self._status, name)

    monkeypatch.setattr(os, "statvfs", lambda path: ReadOnly(real_statvfs(path)))
    with pytest.raises(OutputError, match="is on a file system mounted read-only") as refused:
        short_result.write(out)
    assert "chmod" not in str(refused.value)
    monkeypatch.setattr(os, "statvfs", real_statvfs)
    assert read_folder(out)[0]["seal"] == before and _leftovers(out) == []


def test_a_users_file_in_the_report_folder_is_not_deleted_by_a_rerun(short_result, tmp_path):
    """Notes put beside the report page (`OUT/report/notes.txt`): `report` refuses to
    replace such a folder, but the next `run --out OUT` replaced the result folder, its
    report folder with it, and deleted the notes without a word. Refused now, naming
    the file; figures and the page (PNG and report.html, what the report writes) do
    not count."""
    out = short_result.write(tmp_path / "out")
    (out / "report").mkdir()
    (out / "report" / "report.html").write_text("<p>page</p>")
    (out / "report" / "daily_fluxes.png").write_bytes(b"\x89PNG")
    (out / "report" / "notes.txt").write_text("keep me")
    with pytest.raises(OutputError, match="holds 'report/notes.txt', which fluxpart did not "
                                          "write there"):
        short_result.write(out)
    assert (out / "report" / "notes.txt").read_text() == "keep me" and _leftovers(out) == []
    (out / "report" / "notes.txt").unlink()
    short_result.write(out)
    assert not (out / "report").exists()        # replaced whole with the result, as before
