"""Result safety found open by round faults47 (invented data only).

Each test fails on the code before the fix it names. The references are SHA-256 (FIPS
180-4, through :mod:`hashlib`) deciding that a compressed file holds the recorded input;
the gzip, bzip2 and xz formats as Python's standard library writes them; Linux's proc(5)
for the holder of a ``flock`` and its state; rsync(1)'s temporary-file names (m); and the
exit statuses and one-line errors the command line documents.
"""
from __future__ import annotations

import bz2
import gzip
import lzma
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from fluxpart.cli import _check_output_folder, main
from fluxpart.errors import FluxpartError, OutputError
from fluxpart.manifest import read_manifest
from fluxpart.resultdir import check_folder, folder_lock, lock_file, lock_holder


@pytest.mark.parametrize("compress, suffix", [(gzip.compress, ".gz"), (bz2.compress, ".bz2"),
                                              (lzma.compress, ".xz")])
def test_an_input_compressed_after_the_run_is_found(copy, capsys, compress, suffix):
    """``gzip tower.csv`` after the run (the recorded name gone, tower.csv.gz beside it)
    was "does not exist; give its new location with --input"; now the compressed file is
    unpacked, its bytes checked against the recorded SHA-256, rerun, and named in a note.
    Another file's bytes so compressed are not taken."""
    data = (copy / "tower.csv").read_bytes()
    (copy / "tower.csv").unlink()
    (copy / f"tower.csv{suffix}").write_bytes(compress(data))
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert f"'tower.csv{suffix}' beside it holds its recorded bytes compressed" in out
    (copy / f"tower.csv{suffix}").write_bytes(compress(data[:-200]))
    assert main(["verify", "--quiet", str(copy / "out")]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "tower.csv' recorded in the manifest" in err


def test_out_spelled_through_its_own_name_is_the_folder_itself(copy, monkeypatch):
    """``--out r/../r/`` is r itself (POSIX path resolution), and was refused as "inside
    the result folder r"; ``r/..`` (the folder holding r) is still refused."""
    monkeypatch.chdir(copy)
    _check_output_folder(copy / "out" / ".." / "out")
    with pytest.raises(FluxpartError):
        _check_output_folder(copy / "out" / "..")


def test_a_copy_tools_temporary_file_and_a_nested_result_are_named(copy):
    """An rsync stopped mid-copy leaves ``.annual.parquet.Xy12Ab``; ``cp -r out dest``
    twice puts a result inside the first copy. Both were only "not listed in the
    manifest"; the verdict is unchanged (the folder must hold exactly the files listed)
    and each now says what it is and what to do."""
    out = copy / "out"
    manifest = read_manifest(out)
    (out / ".annual.parquet.Xy12Ab").write_bytes((out / "annual.parquet").read_bytes()[:500])
    shutil.copytree(out, out / "out")
    (out / ".notes.txt.Xy12Ab").write_bytes(b"a file the manifest does not list")
    problems = {p.file: p for p in check_folder(out, manifest)}
    assert problems[".annual.parquet.Xy12Ab"].kind == "extra"
    assert "copy tool's temporary file of annual.parquet" in \
        problems[".annual.parquet.Xy12Ab"].detail
    assert "holds a result folder of its own" in problems["out/"].detail
    assert "temporary" not in problems[".notes.txt.Xy12Ab"].detail


@pytest.mark.skipif(not Path("/proc/locks").is_file(), reason="Linux /proc/locks only")
def test_a_stopped_lock_holder_is_named(tmp_path):
    """A run suspended (Ctrl-Z) while it holds a result folder's lock kept the next run
    waiting its whole timeout, told only "another fluxpart process is writing"; the holder
    is now named by its process id and, where stopped, how to resume it."""
    folder = tmp_path / "out"
    path = lock_file(folder)
    holder = subprocess.Popen(
        [sys.executable, "-c", "import fcntl, sys, time\n"
         "f = open(sys.argv[1], 'a'); fcntl.flock(f, fcntl.LOCK_EX)\n"
         "print('locked', flush=True); time.sleep(60)", str(path)],
        stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "locked"
        assert lock_holder(path) == (holder.pid, False)
        holder.send_signal(signal.SIGSTOP)
        deadline = time.time() + 10
        while lock_holder(path) != (holder.pid, True) and time.time() < deadline:
            time.sleep(0.05)
        assert lock_holder(path) == (holder.pid, True)
        said = []
        with pytest.raises(OutputError, match=f"process {holder.pid}, stopped"):
            with folder_lock(folder, timeout=0.2, notify=said.append):
                pass
        assert f"kill -CONT {holder.pid}" in said[0]
    finally:
        holder.send_signal(signal.SIGCONT)
        holder.kill()
        holder.wait()
    assert lock_holder(path) is None and os.path.exists(path)


def test_a_result_whose_manifest_is_gone_is_named_so(copy, capsys):
    """manifest.json deleted (a tidy-up of JSON files, a copy that left it out): verify
    said "is not a fluxpart result folder" and run "holds other files and no
    manifest.json; it is not a fluxpart result folder", though the folder holds a run's
    tables and run log. Both now say so and what to do; the folder is still neither
    verified nor replaced (nothing says the files are a run's whole result)."""
    out = copy / "out"
    (out / "manifest.json").unlink()
    before = sorted(p.name for p in out.iterdir())
    assert main(["verify", "--quiet", str(out)]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1
    assert "holds a result's files (annual.parquet" in err and "manifest.json is gone" in err
    assert main(["run", str(copy / "site.toml"), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "but no manifest.json (deleted" in err
    assert sorted(p.name for p in out.iterdir()) == before
