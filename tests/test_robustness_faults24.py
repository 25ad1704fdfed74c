"""Result safety, portable verify and batch faults (round faults24).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit
2, nothing half-written or left behind; verify's summary is one line per fact. External
facts used, each named beside its check: the mode of a new file or folder is the mode
asked for less the umask's bits (POSIX ``umask(2)``, ``mkdir(2)`` (m)); ``022`` and
``077`` are the usual umasks (common practice); Python's ``str.isprintable`` and its
``unicode_escape`` codec (Python documentation (m)); ESC (0x1B) opens a terminal control
sequence (ECMA-48 (m)). Invented Quillmoor bundles only, for known-truth recovery.
"""

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from bundles import make_bundle

from fluxpart import store
from fluxpart._validate import printable_line
from fluxpart.cli import main
from fluxpart.errors import OutputError
from fluxpart.verify import result_identity


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


# --------------------------------------------------------------------------- umask

@pytest.mark.parametrize("mask", [0o022, 0o077, 0o027, 0o002])
def test_the_usual_umasks_are_accepted(mask, tmp_path):
    """022 and 077 (and their group variants) leave the owner every right (common
    practice); writing goes on as before under them: the file is written whole, with the
    mode asked for (0o666) less the mask's bits (POSIX ``umask(2)`` (m))."""
    old = os.umask(mask)
    try:
        assert store.require_owner_access() is None            # not refused
        store.atomic_write_bytes(tmp_path / "table.parquet", b"PAR1 data")
        written = tmp_path / "table.parquet"
        assert written.read_bytes() == b"PAR1 data"
        assert written.stat().st_mode & 0o777 == 0o666 & ~mask
    finally:
        os.umask(old)


@pytest.mark.parametrize("mask", [0o777, 0o277, 0o400, 0o100])
def test_a_umask_taking_the_owners_own_access_is_refused(mask):
    """Any of the owner's bits (0o700) in the umask takes read, write or search of what
    is written from its own maker (umask(2): mode = asked & ~mask (m))."""
    old = os.umask(mask)
    try:
        with pytest.raises(OutputError, match=f"umask is {mask:04o}"):
            store.require_owner_access()
    finally:
        os.umask(old)


@pytest.mark.parametrize("command", ["run", "csv", "report"])
def test_run_export_and_report_under_umask_777_are_one_line(bundle, tmp_path, capsys,
                                                            command):
    """Under ``umask 777`` a run, a CSV export and a report wrote into a ``d---------``
    staging folder: a user without root's override got "Permission denied" naming free
    space or another place as the fix and an unremovable staging folder stayed beside
    the target; as root (which ignores modes) the command exited 0 leaving a result of
    mode 000 its owner's other tools could not read. Now one error line naming the
    umask, exit 2, nothing made beside the target."""
    target = tmp_path / "target"
    argv = {"run": ["run", str(bundle / "site.toml"), "--out", str(target)],
            "csv": ["export", str(bundle / "out"), "--csv", str(target)],
            "report": ["report", str(bundle / "out"), "--out", str(target)]}[command]
    before = sorted(os.listdir(bundle / "out"))
    old = os.umask(0o777)
    try:
        code = main(argv)
    finally:
        os.umask(old)
    assert code == 2
    line = _one_error_line(capsys)
    assert "umask is 0777" in line and "umask 022" in line
    assert os.listdir(tmp_path) == []               # no staging folder, no target
    assert sorted(os.listdir(bundle / "out")) == before


def test_batch_under_a_owner_blocking_umask_makes_no_folder(bundle, tmp_path):
    """``batch`` refuses before its output folder or a cluster is made (its own process:
    the umask is the process's)."""
    (tmp_path / "SITES.toml").write_text(
        f'[batch]\nsites = ["{(bundle / "site.toml").as_posix()}"]\nout = "net"\n',
        encoding="utf-8")
    code = ("import os, sys; os.umask(0o277); from fluxpart.cli import main; "
            "sys.exit(main(['batch', 'SITES.toml', '--workers', '1']))")
    done = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True,
                          text=True, timeout=300,
                          env={**os.environ, "PYTHONPATH": str(Path(__file__).parents[1])})
    assert done.returncode == 2
    err = done.stderr.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: ") and "umask is 0277" in err[0], err
    assert sorted(os.listdir(tmp_path)) == ["SITES.toml"]


# --------------------------------------------------------------------------- verify summary

def test_the_result_line_escapes_control_characters_of_names_and_fields():
    """An input named with a line break, or a manifest edited to hold ESC [2J (ECMA-48:
    clear the screen (m)), printed verify's ``result:`` summary over two lines or
    cleared the auditor's terminal. Every non-printable character (``str.isprintable``)
    is now an escape; names in other scripts stay as they are."""
    manifest = {"seed": "0\x1b[2J",
                "provenance": {"input": {"path": "/data/tow\ner.csv", "sha256": "ab" * 32},
                               "site_config": {"path": "/data/Žabník.toml",
                                               "sha256": "cd" * 32}},
                "code": {"version": "0.23.0\r"}}
    line = result_identity(manifest)
    assert line.isprintable()
    assert "seed 0\\x1b[2J" in line and "input tow\\ner.csv" in line
    assert "site config Žabník.toml" in line and "0.23.0\\r" in line


@pytest.mark.parametrize("text", ["tower.csv", "Quillmoor – ÿ 漢字.csv", ""])
def test_printable_text_is_unchanged(text):
    """Printable text of any script passes through (``str.isprintable`` (m))."""
    assert printable_line(text) == text


def test_verify_of_an_input_named_with_a_line_break_prints_one_summary_line(tmp_path,
                                                                            capsys):
    """Known-truth recovery on an invented bundle whose input file name holds a line
    break (legal on POSIX file systems: only NUL and / are excluded (m)): the result
    verifies, and its summary stays one line."""
    config = make_bundle(tmp_path)
    (tmp_path / "tower.csv").rename(tmp_path / "tow\ner.csv")
    text = config.read_text(encoding="utf-8").replace('path = "tower.csv"',
                                                      'path = "tow\\ner.csv"')
    config.write_text(text, encoding="utf-8")
    assert main(["run", str(config), "--out", str(tmp_path / "out")]) == 0
    capsys.readouterr()
    assert main(["verify", str(tmp_path / "out")]) == 0
    out = capsys.readouterr().out.splitlines()
    summary = [line for line in out if line.startswith("result: ")]
    assert len(summary) == 1 and "input tow\\ner.csv (sha256" in summary[0]
    assert not any(line.startswith("er.csv") for line in out)


# --------------------------------------------------------------------------- lost output

def _fluxpart(argv, cwd, stdout, stderr=subprocess.PIPE):
    return subprocess.run([sys.executable, "-m", "fluxpart", *argv], cwd=cwd, stdout=stdout,
                          stderr=stderr, text=True, timeout=300,
                          env={**os.environ, "PYTHONPATH": str(Path(__file__).parents[1]),
                               "OMP_NUM_THREADS": "1"})


needs_dev_full = pytest.mark.skipif(not os.path.exists("/dev/full"),
                                    reason="no /dev/full (Linux full(4))")


@needs_dev_full
def test_verify_into_a_full_disk_is_one_line_not_a_verdict(bundle):
    """``verify > log`` where the log's disk is full: /dev/full answers every write with
    ENOSPC (Linux man-pages full(4) (m)). verify ended in a traceback with exit 1, which
    is its "NOT reproduced" status; now it runs to its end and says the report is lost,
    naming its own status (0: reproduced), exit 2."""
    with open("/dev/full", "w") as full:
        done = _fluxpart(["verify", "out"], bundle, full)
    err = done.stderr.strip().splitlines()
    assert done.returncode == 2, done.stderr
    assert len(err) == 1 and err[0].startswith("error: "), err
    assert "No space left on device" in err[0] and "exit status 0" in err[0]


@needs_dev_full
def test_run_with_its_output_into_a_full_disk_keeps_the_result(bundle, tmp_path):
    """``run`` printing into a full disk: the result folder is written whole (it verifies
    bit-identical to the bundle's) and the lost report is named, exit 2; with standard
    error full too nothing can be said and the status alone tells (2, not a traceback's
    1 or the interpreter's 120)."""
    shutil.copy(bundle / "site.toml", tmp_path / "site.toml")
    shutil.copy(bundle / "tower.csv", tmp_path / "tower.csv")
    with open("/dev/full", "w") as full:
        done = _fluxpart(["run", "site.toml", "--out", "out"], tmp_path, full)
        both = _fluxpart(["run", "site.toml", "--out", "out2"], tmp_path, full, full)
    assert done.returncode == 2 and both.returncode == 2
    assert "exit status 0" in done.stderr and "Traceback" not in done.stderr
    for name in ("out", "out2"):
        assert [file.read_bytes() for file in sorted((tmp_path / name).glob("*.parquet"))] \
            == [file.read_bytes() for file in sorted((bundle / "out").glob("*.parquet"))]


def test_output_piped_into_head_keeps_the_verdict(bundle):
    """A reader that has gone (``| head`` closed early: EPIPE, write(2) (m)) is not lost
    output:
    the verdict's status stays (0, reproduced) and nothing is said."""
    process = subprocess.Popen([sys.executable, "-m", "fluxpart", "verify", "out"],
                               cwd=bundle, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                               env={**os.environ,
                                    "PYTHONPATH": str(Path(__file__).parents[1])})
    process.stdout.close()          # closed before verify's first line (~1 s of work)
    assert process.wait(timeout=300) == 0
    assert process.stderr.read() == b""


# --------------------------------------------------------------------------- verify's input

@pytest.mark.parametrize("kind, named", [("folder", "is now a folder"),
                                         ("fifo", "is now a pipe or a device")])
def test_verify_names_a_folder_or_pipe_where_the_input_was(bundle, tmp_path, capsys, kind,
                                                          named):
    """The recorded input's name now a folder (an unpacked archive named like the file)
    or a named pipe (POSIX file types, stat(2) S_ISDIR / S_ISFIFO (m)): verify said the
    file "does not exist" although the auditor sees an entry of that name. Now it names
    what is there, exit 2, the result folder untouched."""
    copy = tmp_path / "copy"
    shutil.copytree(bundle, copy)
    (copy / "tower.csv").unlink()
    if kind == "folder":
        (copy / "tower.csv").mkdir()
    else:
        os.mkfifo(copy / "tower.csv")
    assert main(["verify", str(copy / "out")]) == 2
    line = _one_error_line(capsys)
    assert named in line and "tower.csv" in line and "does not exist" not in line
    assert "--input" in line


# --------------------------------------------------------------------------- unreadable input

def test_an_unreadable_input_is_named_without_python_s_error_text(tmp_path, monkeypatch):
    """An input whose permission is refused (open(2): EACCES (m); tested by a refused
    open, since root, which these tests may run as, ignores modes): ``run`` and
    ``check`` said "cannot be read: [Errno 13] Permission denied: 'tower.csv'" (Python's
    ``str`` of an OSError, naming the file twice); now the system's reason and the fix."""
    import errno

    from fluxpart import file_digest
    from fluxpart import io as fio
    from fluxpart.errors import InputFileError

    data = tmp_path / "tower.csv"
    data.write_text("a,b\n1,2\n", encoding="utf-8")

    def refused(path, *args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES), str(path))

    # the reader hashes its inputs through the one file digest (round leftovers58)
    monkeypatch.setattr(file_digest, "open", refused, raising=False)
    with pytest.raises(InputFileError) as raised:
        fio._file_sha256(data)
    message = str(raised.value)
    assert "[Errno" not in message and message.count("tower.csv") == 1
    assert os.strerror(errno.EACCES) in message and "readable by this user" in message
    # an I/O error of the medium is named as such, with no permission fix
    other = fio._cannot_read(data, OSError(errno.EIO, os.strerror(errno.EIO), str(data)))
    assert os.strerror(errno.EIO) in other and "readable by this user" not in other
