"""Result safety, portable verify and batch faults (round faults23).

Contracts (README "Command line", DESIGN §7): a genuine result verifies wherever it is
moved; an edited input is NOT reproduced and verify names what differs; nothing is ever
half-written; a user error is one ``error:`` line, exit 2, no traceback. External facts
used, each named beside its check: Python's ``json`` decoder recursing per level and its
4300-digit limit on text-to-int conversion (Python documentation, ``sys.
set_int_max_str_digits`` (m)); a dangling symbolic link and a loop of links (``ELOOP``)
(Linux man-pages symlink(7), path_resolution(7) (m)); the zip local-file-header
signature ``PK\\x03\\x04`` (PKWARE APPNOTE 4.3.7) and the ustar magic at byte 257 (POSIX
pax) written by the standard library's ``zipfile`` and ``tarfile``; brackets as
pattern characters (POSIX glob(7) (m)); matplotlib's temporary cache folder where
``MPLCONFIGDIR`` cannot be written (matplotlib documentation (m)). Invented Quillmoor
bundles only, for known-truth recovery.
"""

import os
import shutil
import subprocess
import sys
import tarfile
import threading
import time
import zipfile
from pathlib import Path

import pandas as pd
import pytest
from bundles import make_bundle

from fluxpart import resultdir
from fluxpart.cli import main
from fluxpart.verify import verify


def _copy(bundle, tmp_path) -> Path:
    target = tmp_path / "copy"
    shutil.copytree(bundle, target, symlinks=True)
    return target


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


# --------------------------------------------------------------------------- manifest edits

@pytest.mark.parametrize("command", ["verify", "report", "export"])
@pytest.mark.parametrize("text, named", [
    # the decoder recurses per level: 100,000 levels exceed Python's recursion limit
    ("[" * 100_000 + "]" * 100_000, "nested too deep"),
    # Python 3.11+ refuses converting text of more than 4300 digits to int (CVE-2020-10735)
    ('{"seed": ' + "9" * 5000 + "}", "4300 digits"),
])
def test_a_manifest_no_fluxpart_writes_is_one_error_line(bundle, tmp_path, capsys, command,
                                                         text, named):
    """A manifest.json replaced by deeply nested arrays or holding a 5000-digit integer
    is valid JSON that Python's reader cannot take: verify, report and export ended in a
    RecursionError or ValueError traceback (exit 1). Now one error line, exit 2."""
    folder = _copy(bundle, tmp_path) / "out"
    (folder / "manifest.json").write_text(text, encoding="utf-8")
    argv = [command, str(folder)] + (["--csv", str(tmp_path / "csv")]
                                     if command == "export" else [])
    assert main(argv) == 2
    line = _one_error_line(capsys)
    assert named in line and "manifest.json" in line
    assert not (tmp_path / "csv").exists()


# --------------------------------------------------------------------------- symbolic links

def test_a_dangling_link_as_input_is_named_as_a_link(bundle, tmp_path, capsys):
    """An input kept as a symbolic link whose target was moved (symlink(7) (m)): run and
    check said it "does not exist; the folder has 'tower.csv', which differs only in upper
    and lower case", naming the link itself as another file; verify said "does not
    exist". Each now names the link and where it points."""
    root = _copy(bundle, tmp_path)
    (root / "tower.csv").rename(root / "moved.csv")
    (root / "tower.csv").symlink_to("gone.csv")
    for argv in (["run", str(root / "site.toml"), "--out", str(root / "new")],
                 ["check", str(root / "site.toml")],
                 ["verify", str(root / "out")]):
        assert main(argv) == 2
        line = _one_error_line(capsys)
        assert "symbolic link to 'gone.csv'" in line, line
        assert "differs only in upper and lower case" not in line
    assert not (root / "new").exists()


def test_a_link_that_leads_to_itself_as_input_is_named(bundle, tmp_path, capsys):
    """A link to itself (ELOOP, path_resolution(7) (m)) as the recorded input: verify said
    it does not exist, check named it as a file differing in case."""
    root = _copy(bundle, tmp_path)
    (root / "tower.csv").unlink()
    (root / "tower.csv").symlink_to("tower.csv")
    for argv in (["check", str(root / "site.toml")], ["verify", str(root / "out")]):
        assert main(argv) == 2
        line = _one_error_line(capsys)
        assert "leads back to itself" in line, line


# --------------------------------------------------------------------------- archives

def test_a_packed_result_given_to_verify_is_named_as_an_archive(bundle, tmp_path, capsys):
    """A result folder handed on as a zip or tar archive (written here by the standard
    library's zipfile and tarfile) was "a file, not a result folder"; it is now named as
    the archive it is (zip header PK\\x03\\x04, PKWARE APPNOTE 4.3.7; "ustar" at byte 257,
    POSIX pax), with the fix: unpack it."""
    packed = tmp_path / "result.zip"
    with zipfile.ZipFile(packed, "w") as archive:
        for path in sorted((bundle / "out").iterdir()):
            archive.write(path, f"out/{path.name}")
    tarred = tmp_path / "result.tar"
    with tarfile.open(tarred, "w") as archive:
        archive.add(bundle / "out", arcname="out")
    for path, kind in ((packed, "a zip archive"), (tarred, "a tar archive")):
        for command in ("verify", "report"):
            assert main([command, str(path)]) == 2
            line = _one_error_line(capsys)
            assert kind in line and "unpack it" in line, line
    assert main(["verify", str(bundle / "tower.csv")]) == 2       # a text file: as before
    assert "is a file, not a result folder" in _one_error_line(capsys)


# --------------------------------------------------------------------------- the swap

def test_an_earlier_result_that_cannot_be_removed_is_named(bundle, tmp_path, capsys,
                                                            monkeypatch):
    """A table of the earlier result kept immutable (chattr +i, a backup tool's
    protection: unlink fails EPERM also for root, chattr(1) (m)) stayed after the swap in
    a hidden staging folder, exit 0 and not a word; each later verify took it for a run
    stopped part-way. The new result is written whole as before, and a note now says
    where the earlier one stays and why (the failure injected at its removal)."""
    root = _copy(bundle, tmp_path)
    real = shutil.rmtree

    def refusing(path, ignore_errors=False, onerror=None):
        path = Path(path)
        if ".out.staging-" in path.name and (path / "manifest.json").is_file():
            failed = path / "daily.parquet"
            error = PermissionError(1, "Operation not permitted", str(failed))
            if onerror is not None:
                onerror(os.unlink, str(failed), (PermissionError, error, None))
            elif not ignore_errors:
                raise error
            return None
        return real(path, ignore_errors=ignore_errors, onerror=onerror)

    monkeypatch.setattr(resultdir.shutil, "rmtree", refusing)
    config = root / "site.toml"
    config.write_text(config.read_text().replace("seed = 0", "seed = 1"))
    assert main(["run", str(config), "--out", str(root / "out")]) == 0
    err = capsys.readouterr().err
    notes = [line for line in err.splitlines() if "could not be removed whole" in line]
    assert len(notes) == 1 and "Operation not permitted" in notes[0]
    left = [p for p in root.iterdir() if p.name.startswith(".out.staging-")]
    assert len(left) == 1 and str(left[0]) in notes[0]
    monkeypatch.setattr(resultdir.shutil, "rmtree", real)
    manifest = resultdir.read_manifest(root / "out")
    assert manifest["seed"] == 1 and resultdir.check_folder(root / "out", manifest) == []
    old = resultdir.read_manifest(left[0])
    assert old["seed"] == 0


# --------------------------------------------------------------------------- an edited input

def _edit_value(path: Path, line: int, column: int, add: float) -> tuple[str, str]:
    """Add `add` to one cell of a CSV line; return (stamp, old text)."""
    lines = path.read_text().splitlines(keepends=True)
    cells = lines[line].rstrip("\n").split(",")
    old = cells[column]
    cells[column] = f"{float(old) + add:.3f}"
    lines[line] = ",".join(cells) + "\n"
    path.write_text("".join(lines))
    return cells[0], old


def test_verify_names_the_record_and_column_of_an_edited_input(bundle, tmp_path):
    """An input edited after the run was "not the input file the result was computed
    from", with no word on what changed. Known truth: one NEE value of the invented
    record (line 500 of the file, stamp 202101110930 marking the end of the half-hour starting
    09:00) raised by 1.5; verify now names that record, the file's column and both
    values, and the verdict stays NOT reproduced."""
    root = _copy(bundle, tmp_path)
    stamp, old = _edit_value(root / "tower.csv", 499, 1, 1.5)
    assert stamp == "202101110930"
    report = verify(root / "out")
    assert not report.reproduced and report.exit_code == 1
    (difference,) = report.differences
    text = difference.describe()
    assert "1 value(s) in 1 record(s) differ" in text
    # the file's own stamp beside the result's interval start, so the edited line is found
    # by the stamp it holds (review46): the file stamps interval ends, 202101110930
    assert ("record starting 2021-01-11 09:00, stamped 2021-01-11 09:30 in the file (the "
            "interval's end), 'co2_exchange' (nee") in text
    assert f"{float(old):.10g} then, {float(old) + 1.5:.10g} now" in text


def test_an_edited_site_flag_is_named_kept_or_rejected_not_by_its_internal_code(bundle,
                                                                               tmp_path):
    """The run reads the site flag as 0 (kept) or 1 (rejected) after [input] flag_accept
    (here [0], the example's); an edit of the file's code 0 to 2 was shown as "0 then,
    1 now" beside the file's column name, a 1 the file does not hold (review26). Known
    truth: line 500's qc_co2 set to 2 (a code the config rejects) is named as the record
    kept then and rejected now."""
    root = _copy(bundle, tmp_path)
    stamp, old = _edit_value(root / "tower.csv", 499, 8, 2.0)
    assert stamp == "202101110930" and float(old) == 0.0
    text = verify(root / "out").differences[0].describe()
    assert "1 value(s) in 1 record(s) differ" in text
    assert ("record starting 2021-01-11 09:00, stamped 2021-01-11 09:30 in the file (the "
            "interval's end), 'qc_co2' (site flag: record kept or rejected "
            "by [input] flag_accept): kept then, rejected now") in text
    assert "0 then" not in text and "1 now" not in text


def test_the_files_own_stamp_is_named_in_its_clock():
    """A record is named by its interval start in local standard time; the file may
    stamp it at the interval's end and in civil time with daylight saving. Known truth:
    Europe/Berlin keeps UTC+2 in May (CEST; IANA time zone database), so the half-hour
    starting 13:00 standard time (UTC+1) ends 14:30 on the logger's clock; a file stamped
    at interval starts in standard time, or with its own UTC offsets, needs no second
    stamp."""
    from types import SimpleNamespace

    from fluxpart.input_changes import _file_stamp

    half_hour = pd.Timedelta(minutes=30)
    start = pd.Timestamp("2021-05-15 13:00")
    civil = SimpleNamespace(time_marks="end", time_zone="Europe/Berlin",
                            time_format="%d.%m.%Y %H:%M", site=SimpleNamespace(utc_offset=1.0))
    assert _file_stamp(start, civil, half_hour) == (
        ", stamped 2021-05-15 14:30 in the file (the interval's end, civil time of "
        "Europe/Berlin),")
    winter = pd.Timestamp("2021-01-15 13:00")            # CET = standard time
    assert "stamped 2021-01-15 13:30 in the file" in _file_stamp(winter, civil, half_hour)
    plain = SimpleNamespace(time_marks="start", time_zone=None, time_format="%Y%m%d%H%M",
                            site=SimpleNamespace(utc_offset=1.0))
    assert _file_stamp(start, plain, half_hour) == ""
    middle = SimpleNamespace(**{**vars(plain), "time_marks": "middle"})
    assert _file_stamp(start, middle, half_hour) == (
        ", stamped 2021-05-15 13:15 in the file (the interval's middle),")
    offsets = SimpleNamespace(**{**vars(plain), "time_marks": "end",
                                 "time_format": "%Y-%m-%dT%H:%M%z"})
    assert _file_stamp(start, offsets, half_hour) == ""
    # a count of time since a date (layouts38): the file writes a number, no stamp
    counted = SimpleNamespace(**{**vars(offsets), "time_format": "days since 1899-12-30"})
    assert _file_stamp(start, counted, half_hour) == ""


def test_verify_names_records_added_and_removed_from_an_input(bundle, tmp_path):
    """Known truth: the last 48 half-hours of the invented record cut off (a copy cut
    short), then a day of records appended that the run never read."""
    root = _copy(bundle, tmp_path)
    lines = (root / "tower.csv").read_text().splitlines(keepends=True)
    (root / "tower.csv").write_text("".join(lines[:-48]))
    text = verify(root / "out").differences[0].describe()
    assert "48 record(s) removed (first starting 2021-01-30 00:00)" in text
    ends = pd.date_range("2021-01-31 00:30", periods=48, freq="30min")   # stamps mark ends
    extra = [end.strftime("%Y%m%d%H%M") + lines[-1][12:] for end in ends]
    (root / "tower.csv").write_text("".join(lines + extra))
    text = verify(root / "out").differences[0].describe()
    assert "48 record(s) added (first starting 2021-01-31 00:00)" in text


def test_an_edited_input_is_not_located_in_a_folder_that_fails_its_manifest(bundle,
                                                                            tmp_path):
    """The stored time series locates an edit only where the folder is the one its
    manifest describes: with a table changed too (here one byte appended to
    daily.parquet, so its SHA-256 is not the recorded one) the folder's own values are
    no evidence of what the run read, and no record is named."""
    root = _copy(bundle, tmp_path)
    _edit_value(root / "tower.csv", 499, 1, 1.5)
    with open(root / "out" / "daily.parquet", "ab") as handle:
        handle.write(b"\0")
    report = verify(root / "out")
    texts = [d.describe() for d in report.differences]
    assert any("it is not the input file the result was computed from, so nothing"
               in text for text in texts), texts
    assert not any("read as the run read it" in text for text in texts)


def test_the_located_changes_of_the_recorded_input_are_none(bundle):
    """The comparison itself must not invent differences: the unedited input, read with
    its recorded site config, equals the input values its stored time series holds
    (every value, bit for bit)."""
    from fluxpart.input_changes import located_changes
    from fluxpart.store import read_table

    stored = read_table(bundle / "out" / "timeseries.parquet")
    text = located_changes(bundle / "site.toml", bundle / "tower.csv", stored)
    assert text.startswith("read as the run read it, every value equals")


# --------------------------------------------------------------------------- batch

def test_a_site_folder_named_with_brackets_is_listed_literally(tmp_path):
    """A site folder "tower[2021]" is a legal name, but glob reads "[2021]" as one of
    the characters 2, 0, 1 (glob(7) (m)): the batch refused an existing site config as
    matching nothing. A path naming an existing file is now taken as it is; a pattern
    still globs."""
    from fluxpart.batch import read_sites_file

    make_bundle(tmp_path / "tower[2021]")
    make_bundle(tmp_path / "plain")
    (tmp_path / "SITES.toml").write_text(
        '[batch]\nsites = ["tower[2021]/site.toml", "pla[i]n/site.toml"]\n', "utf-8")
    network = read_sites_file(tmp_path / "SITES.toml")
    assert [config for _, config in network.sites] == [
        (tmp_path / "tower[2021]" / "site.toml").resolve(),
        (tmp_path / "plain" / "site.toml").resolve()]


def test_a_cluster_without_workers_is_named_once(tmp_path, monkeypatch, capsys):
    """An existing cluster whose only worker died (a node rebooted, kill -9) kept the
    sites queued on its scheduler: the batch waited without a word and without end.
    Known truth: a cluster started with no worker gets the note once after the wait
    (shortened here to 1 s), and the batch completes once a worker joins."""
    import distributed

    from fluxpart import batch

    def quick(key, config, directory, *, force=False):
        return batch._failure({"key": key, "config": config, "directory": directory},
                              ValueError("not computed in this test"))

    for name in ("a", "b"):
        make_bundle(tmp_path / name, records=24 * 2 * 5, name=f"{name}.toml")
    (tmp_path / "SITES.toml").write_text(
        '[batch]\nsites = ["a/a.toml", "b/b.toml"]\nout = "res"\n', encoding="utf-8")
    monkeypatch.setattr(batch, "run_site", quick)
    monkeypatch.setattr(batch, "_NO_WORKER_NOTE_SECONDS", 1.0)
    with distributed.LocalCluster(n_workers=0, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster:
        joining = threading.Timer(4.0, lambda: cluster.scale(1))
        joining.start()
        began = time.monotonic()
        try:
            report = batch.run_batch(tmp_path / "SITES.toml",
                                     scheduler=cluster.scheduler_address)
        finally:
            joining.cancel()
    assert time.monotonic() - began >= 3.5
    notes = [line for line in capsys.readouterr().err.splitlines()
             if "has had no worker" in line]
    assert len(notes) == 1 and cluster.scheduler_address in notes[0]
    assert sorted(o.key for o in report.outcomes) == ["a", "b"]


def test_the_no_worker_note_waits_its_time():
    """Before the wait the note is None; a cluster that has a worker (since None) never
    gets it."""
    from fluxpart import batch

    wait = batch._NO_WORKER_NOTE_SECONDS
    assert batch._no_worker_note(100.0, 100.0 + wait - 0.1, "tcp://x:1") is None
    assert batch._no_worker_note(None, 1e9, "tcp://x:1") is None
    assert "tcp://x:1" in batch._no_worker_note(100.0, 100.0 + wait, "tcp://x:1")


# --------------------------------------------------------------------------- environment

def test_an_unwritable_matplotlib_folder_adds_no_lines(tmp_path):
    """Where matplotlib's config and cache folder cannot be written (a read-only or
    missing home in a container or service account; here MPLCONFIGDIR below a plain
    file), matplotlib uses a temporary folder and says so in two WARNING lines
    (matplotlib documentation (m)): every `report` printed them beside its own lines.
    Importing it for the figures now prints nothing; the figures are unchanged."""
    blocker = tmp_path / "file"
    blocker.write_text("")
    env = dict(os.environ, MPLCONFIGDIR=str(blocker / "mpl"), HOME=str(blocker),
               PYTHONPATH=os.pathsep.join(sys.path))
    code = ("from fluxpart.figures import _matplotlib; "
            "matplotlib = _matplotlib()[0]; print(matplotlib.get_cachedir())")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          env=env, timeout=300)
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
    assert not done.stdout.strip().startswith(str(blocker))    # a temporary folder used


def test_a_folder_named_with_a_leading_dash_is_named(bundle, tmp_path, capsys, monkeypatch):
    """A result folder named "-out" (a script's or a typo of --out) is read by argparse
    as an option: verify said only "the following arguments are required: directory".
    The one error line now says the argument is also a path and how to give it
    (./-out; POSIX Utility Syntax Guideline 10 (m)); ./-out verifies."""
    shutil.copytree(bundle / "out", tmp_path / "-out")
    shutil.copy(bundle / "tower.csv", tmp_path / "tower.csv")
    shutil.copy(bundle / "site.toml", tmp_path / "site.toml")
    monkeypatch.chdir(tmp_path)

    def usage_error(argv) -> str:
        with pytest.raises(SystemExit) as stop:
            main(argv)
        assert stop.value.code == 2
        return _one_error_line(capsys)

    line = usage_error(["verify", "-out"])
    assert "'-out' was read as an option" in line and "'./-out'" in line
    assert "'./-out'" in usage_error(["verify", "./-out", "-out"])   # also as a leftover
    assert "read as an option" not in usage_error(["verify", "--no-such-option"])
    assert main(["verify", "./-out"]) == 0


def test_a_file_size_limit_under_run_names_the_limit(bundle, tmp_path):
    """Under a file-size limit (ulimit -f; RLIMIT_FSIZE, setrlimit(2) (m)) a table's write
    fails EFBIG (Python ignores SIGXFSZ): run said "File too large; the earlier result,
    if any, is unchanged", with no fix; the line now names the limit. Nothing is left."""
    import resource

    root = _copy(bundle, tmp_path)

    def limited():
        resource.setrlimit(resource.RLIMIT_FSIZE, (100 * 1024, 100 * 1024))

    env = dict(os.environ, PYTHONPATH=os.pathsep.join(sys.path), OMP_NUM_THREADS="1")
    done = subprocess.run([sys.executable, "-m", "fluxpart", "run", str(root / "site.toml"),
                           "--out", str(root / "new")], capture_output=True, text=True,
                          env=env, preexec_fn=limited, timeout=600)
    assert done.returncode == 2
    err = done.stderr.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: ") and "ulimit -f" in err[0], err
    assert not [p.name for p in root.iterdir() if "new" in p.name]


def test_an_input_larger_than_memory_is_named_with_its_size(bundle, tmp_path):
    """A 6 GiB input of zero bytes (a sparse file: truncate(1), nothing written reads as
    NUL, lseek(2) (m); a preallocated card file, a disk image) under a 3 GB memory limit
    (RLIMIT_AS, setrlimit(2) (m)): `check` said "ran out of memory ... give the process
    more memory", naming neither the file nor its size. The one error line now names
    both and the zero bytes."""
    import resource

    root = _copy(bundle, tmp_path)
    with open(root / "big.csv", "wb") as handle:
        handle.truncate(6 * 1024 ** 3)
    config = root / "site.toml"
    config.write_text(config.read_text().replace('path = "tower.csv"', 'path = "big.csv"'))

    def limited():
        resource.setrlimit(resource.RLIMIT_AS, (3 * 10 ** 9, 3 * 10 ** 9))

    env = dict(os.environ, PYTHONPATH=os.pathsep.join(sys.path), OMP_NUM_THREADS="1")
    done = subprocess.run([sys.executable, "-m", "fluxpart", "check", str(config)],
                          capture_output=True, text=True, env=env, preexec_fn=limited,
                          timeout=600)
    assert done.returncode == 2
    err = done.stderr.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: input file "), err
    assert "big.csv' is 6.4 GB and begins with zero bytes only" in err[0]
