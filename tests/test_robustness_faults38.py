"""Faults found by round faults38 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import errno
import subprocess
import sys

import pytest

from fluxpart.cli import main
from fluxpart.errors import OutputError


def _child(code: str) -> subprocess.CompletedProcess:
    """`code` run by a child Python that imports this tree's fluxpart."""
    import os
    from pathlib import Path

    tree = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ, PYTHONPATH=tree + os.pathsep + os.environ.get("PYTHONPATH", ""))
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, env=env)


def test_a_data_segment_limit_counts_as_a_memory_limit():
    """``ulimit -d`` (RLIMIT_DATA) counts every private writable mapping since Linux 4.7
    (setrlimit(2) (m)), OpenBLAS's 32 MiB work buffers among them. Only ``ulimit -v`` was
    asked, so under ``ulimit -d`` 100 MB `run` hung in OpenBLAS's allocator (SIGTERM
    cannot reach a C loop), 60 MB ended with OpenBLAS's own message and exit 1, 130 MB
    crashed (exit 139). Now the room under either limit is asked before OpenBLAS takes
    its buffers, and its lack is the one line about memory (exit 2)."""
    if not sys.platform.startswith("linux"):
        pytest.skip("RLIMIT_DATA of private mappings is Linux's (4.7 and later)")
    probe = """\
import resource
resource.setrlimit(resource.RLIMIT_DATA, (90 << 20, resource.RLIM_INFINITY))
from fluxpart import cli, fingerprint
room = fingerprint._address_headroom()
assert room is not None and 0 < room < 90 << 20, room
assert cli._address_space_limited()
try:
    fingerprint.require_address_space(room + 1, 'for a test')
except MemoryError as error:
    assert 'ulimit -v or -d' in str(error), error
else:
    raise SystemExit('no MemoryError')
fingerprint.require_address_space(room // 2, 'for a test')
"""
    done = _child(probe)
    assert done.returncode == 0, done.stderr[-800:]


def test_a_file_system_without_locks_is_named_as_such(tmp_path, monkeypatch):
    """An NFS mount whose lock service is down (or mounted ``nolock``) answers flock(2)
    with ENOLCK, "No locks available" (nfs(5) (m)). `run` said "cannot create the lock
    file ...: No locks available; choose a writable output folder" of a writable folder.
    Now the lock is named, with what to do about the mount."""
    import fcntl

    from fluxpart.resultdir import folder_lock

    def no_locks(fd, operation):
        raise OSError(errno.ENOLCK, "No locks available")

    monkeypatch.setattr(fcntl, "flock", no_locks)
    with pytest.raises(OutputError) as refused:
        with folder_lock(tmp_path / "out"):
            pass
    said = str(refused.value)
    assert "cannot lock the lock file" in said and "gives no file locks" in said
    assert "choose a writable output folder" not in said


def test_a_dangling_link_above_an_output_is_named(copy, capsys):
    """An output below a symbolic link whose target is gone (moved, or a share not
    mounted): `run` computed the whole result, then ended in a FileExistsError traceback
    from ``mkdir(parents=True)`` (``Path.exists`` follows the link, so the folder looked
    missing); `report --out` said "cannot be written (File exists)", `export --csv` that
    the link "is a file", `--netcdf` "cannot write in ... (File exists)". Now each is one
    line naming the link and where it leads, before any work."""
    link = copy / "shares"
    link.symlink_to(copy / "unmounted")
    commands = (["run", str(copy / "site.toml"), "--out", str(link / "out"), "--quiet"],
                ["report", "--quiet", str(copy / "out"), "--out", str(link / "rep")],
                ["export", "--csv", str(link / "csv"), str(copy / "out")],
                ["export", "--netcdf", str(link / "a" / "x.nc"), str(copy / "out")])
    for args in commands:
        assert main(args) == 2
        said = capsys.readouterr().err.strip().splitlines()
        assert len(said) == 1 and "a symbolic link to" in said[0], said
        assert repr(str(copy / "unmounted")) in said[0] and "File exists" not in said[0]
    assert not (copy / "unmounted").exists() and link.is_symlink()


def test_a_pipe_or_device_as_output_is_named_by_its_kind(tmp_path):
    """A named pipe or a device node given as the output folder was refused as "exists
    and is not a folder (an existing file)"; now its kind is named (inode(7): S_ISFIFO,
    S_ISCHR (m)); a plain file is still "an existing file"."""
    import os

    from fluxpart.resultdir import replace_refusal

    os.mkfifo(tmp_path / "pipe")
    (tmp_path / "plain").write_text("notes\n")
    assert replace_refusal(tmp_path / "pipe") == "exists and is not a folder (a named pipe)"
    assert replace_refusal(tmp_path / "plain") == "exists and is not a folder (an existing file)"
    assert replace_refusal("/dev/null") == "exists and is not a folder (a device)"


def test_absolute_paths_work_from_a_deleted_current_folder(tmp_path, monkeypatch):
    """A shell left in a folder another run replaced: `run` and `verify` of absolute
    paths said "the current folder no longer exists ..., give absolute paths". The
    warnings' stack level resolved every frame's file name, ``<frozen runpy>`` of
    ``python -m`` too, and resolving a relative name asks for the current folder
    (``os.getcwd``: ENOENT, getcwd(3) (m)). Names that are not absolute are now no file
    of the package; the level is the same."""
    from fluxpart.errors import caller_stacklevel

    code = compile("level = caller_stacklevel()", "<frozen runpy>", "exec")
    here = {"caller_stacklevel": caller_stacklevel}
    exec(code, here)
    gone = tmp_path / "gone"
    gone.mkdir()
    monkeypatch.chdir(gone)
    gone.rmdir()
    found = {"caller_stacklevel": caller_stacklevel}
    exec(code, found)
    assert found["level"] == here["level"] == 1


def test_a_relative_config_in_a_deleted_folder_names_the_folder(tmp_path, monkeypatch,
                                                                capsys):
    """From a deleted current folder `run site.toml` said only "site config 'site.toml'
    does not exist", sending the user to look for a file that is where it was; the
    line now names the gone folder and the fix. An absent file elsewhere reads as before."""
    gone = tmp_path / "gone"
    gone.mkdir()
    monkeypatch.chdir(gone)
    gone.rmdir()
    assert main(["check", "site.toml"]) == 2
    said = capsys.readouterr().err
    assert "does not exist here: the current folder no longer exists" in said
    monkeypatch.chdir(tmp_path)
    assert main(["check", "site.toml"]) == 2
    assert capsys.readouterr().err.strip() == "error: site config 'site.toml' does not exist"


def test_a_batch_of_absolute_paths_starts_from_a_deleted_current_folder(tmp_path,
                                                                        monkeypatch):
    """`batch /abs/sites.toml` from a deleted current folder ended in a FileNotFoundError
    from multiprocessing (``spawn.get_preparation_data`` asks ``os.getcwd`` to start each
    worker), told as "the current folder no longer exists ... give absolute paths" of
    absolute paths. The batch now runs in the network file's folder and goes back to the
    deleted one after; a relative path is left to fail as before."""
    import os
    from pathlib import Path

    from fluxpart.batch import _out_of_deleted_folder

    sites = tmp_path / "net" / "sites.toml"
    sites.parent.mkdir()
    gone = tmp_path / "gone"
    gone.mkdir()
    monkeypatch.chdir(gone)
    gone.rmdir()
    with _out_of_deleted_folder(sites, None):
        assert Path(os.getcwd()) == sites.parent
    with pytest.raises(FileNotFoundError):
        os.getcwd()                         # back in the deleted folder
    with _out_of_deleted_folder(sites, "relative-out"):
        with pytest.raises(FileNotFoundError):
            os.getcwd()


def test_the_netcdf_export_asks_room_for_scipys_openblas_first(monkeypatch):
    """xarray imports dask.array, which imports SciPy's FFT and with it SciPy's OpenBLAS;
    without room for its buffers OpenBLAS retried without end: `export --netcdf` hung
    under ``ulimit -d`` 200 MB and ``ulimit -v`` 450 MB, crashed at ``-d`` 235 MB (139)
    and blamed a noexec file system at ``-v`` 550 MB. The libraries are now loaded (with
    the room asked) before xarray is imported, so the lack is the one memory line; in
    every case measured it is."""
    from fluxpart import export, fingerprint

    def no_room():
        raise MemoryError("64 MiB for NumPy's OpenBLAS work buffers, 10 MiB left")

    monkeypatch.setattr(fingerprint, "load_blas_libraries", no_room)
    with pytest.raises(MemoryError):
        export._xarray()


def test_a_site_out_of_memory_in_a_batch_is_one_line():
    """A batch whose workers run under a memory limit: each site failed as an internal
    error with a 10-line traceback (the OpenBLAS room check's MemoryError, or pyarrow's
    ArrowMemoryError, a MemoryError too). Now one line per site saying it ran out of
    memory, no traceback; its kind stays 'internal' (the cluster's), the failures table
    unchanged; another exception keeps its traceback."""
    from fluxpart.batch import _failure

    common = {"key": "a-site", "config": "/net/a/site.toml", "directory": "/net/out/a-site"}
    failed = _failure(common, MemoryError("realloc of size 16384 failed"))
    assert failed.kind == "internal" and failed.traceback == ""
    assert failed.message.startswith("ran out of memory in the worker process (realloc")
    assert "\n" not in failed.note
    assert _failure(common, ValueError("a bug")).traceback


def test_out_of_memory_ends_the_process_without_the_interpreters_clean_up():
    """Under ``ulimit -d`` 60 MB `check` printed its one memory line, then the
    interpreter's clean-up under the same limit crashed (SIGSEGV, exit 139). As the
    `fluxpart` process itself, a MemoryError's line is now the end: output flushed, exit
    2, no clean-up (an ``atexit`` function does not run); called from Python, main()
    returns 2 as before."""
    probe = """\
import atexit, sys
from fluxpart import cli
atexit.register(lambda: print('clean-up ran', file=sys.stderr))
parse = cli._parse
def out_of_memory(args):
    raise MemoryError
def parsed(argv):
    args = parse(argv)
    args.handler = out_of_memory
    return args
cli._parse = parsed
print('returned', cli.main(['check', 'x.toml']), flush=True)
sys.argv = ['fluxpart', 'check', 'x.toml']
cli.main()
print('not reached')
"""
    done = _child(probe)
    assert done.returncode == 2, done.stderr[-600:]
    assert done.stdout.splitlines() == ["returned 2"]
    lines = done.stderr.splitlines()
    assert len(lines) == 2 and all(line.startswith("error: ran out of memory") for line in lines)
