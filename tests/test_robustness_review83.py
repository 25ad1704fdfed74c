"""Result safety found open by round review83 (invented data only).

Each test fails on the code before the fix it names. The references are SHA-256 (FIPS
180-4, through :mod:`hashlib`) deciding that a compressed file holds the recorded input;
the gzip and xz formats as Python's standard library writes them; Linux's proc(5) for
the lines of ``/proc/locks``; and the exit statuses and one-line errors the command line
documents.
"""
from __future__ import annotations

import gzip
import hashlib
import json
import lzma
import os
import shutil

import pytest

from fluxpart import verify_restore
from fluxpart.cli import main
from fluxpart.manifest import lost_manifest_remedy
from fluxpart.resultdir import flock_holder


def test_a_decompression_bomb_beside_the_input_is_given_up_early(copy, capsys, monkeypatch):
    """A small gzip file beside a gone input that unpacks to far more than any tower file
    was unpacked whole into memory, then every text re-saving of it built (a 1.4 MB file
    of 300 MB of zeros: 2 GB of memory, 42 s). Now it is unpacked a chunk at a time and
    given up past the limit (lowered here to 1 MiB, the bomb unpacking to 4 MiB): the
    verdict is that the input cannot be found, and no chunk past the limit is read."""
    monkeypatch.setattr(verify_restore, "MOST_UNPACKED_BYTES", 2**20)
    read = []
    opener = gzip.open

    def counting(path, mode):
        stream = opener(path, mode)
        original = stream.read
        stream.read = lambda size=-1: read.append(size) or original(size)
        return stream

    monkeypatch.setattr(verify_restore, "_packed_opener", lambda suffix: counting)
    (copy / "tower.csv").unlink()
    (copy / "tower.csv.gz").write_bytes(gzip.compress(bytes(4 * 2**20)))
    assert main(["verify", "--quiet", str(copy / "out")]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "does not exist" in err
    assert "'tower.csv.gz' beside it does not hold its recorded bytes" in err
    # the limit is 1 MiB in chunks of 1 MiB: the second chunk passes it and ends the read
    assert read and all(size == 2**20 for size in read) and len(read) <= 2


def test_an_input_too_large_to_hold_is_unpacked_to_a_file_and_checked(copy, capsys,
                                                                         monkeypatch):
    """Past the size held in memory (lowered here below the demo input's), the exact
    bytes inside an xz file are still found by their SHA-256 and unpacked to the scratch
    folder a chunk at a time; another file's bytes so compressed are not taken."""
    data = (copy / "tower.csv").read_bytes()
    monkeypatch.setattr(verify_restore, "MOST_RESAVED_BYTES", len(data) // 4)
    (copy / "tower.csv").unlink()
    (copy / "tower.csv.xz").write_bytes(lzma.compress(data))
    assert main(["verify", str(copy / "out")]) == 0
    assert "'tower.csv.xz' beside it holds its recorded bytes" in capsys.readouterr().out
    (copy / "tower.csv.xz").write_bytes(lzma.compress(data[:-1] + b"7"))
    assert main(["verify", "--quiet", str(copy / "out")]) == 2
    err = capsys.readouterr().err
    assert "does not exist; 'tower.csv.xz' beside it does not hold its recorded" in err
    (copy / "tower.csv.xz").unlink()
    assert main(["verify", "--quiet", str(copy / "out")]) == 2
    assert "does not exist; give its new location" in capsys.readouterr().err


def test_a_restored_copy_that_does_not_match_is_not_left(tmp_path, monkeypatch):
    """The file unpacked to disk is hashed as it is written: bytes that differ from the
    recorded SHA-256 (the compressed file changed since it was hashed) give None and
    leave nothing in the scratch folder."""
    packed = tmp_path / "tower.csv.gz"
    packed.write_bytes(gzip.compress(b"a,b\n1,2\n"))
    scratch = tmp_path / "scratch"
    recorded = hashlib.sha256(b"a,b\n1,2\n").hexdigest()
    restored = verify_restore._unpacked_copy(packed, ".gz", recorded, "tower.csv", scratch, 0)
    assert restored is not None and restored.read_bytes() == b"a,b\n1,2\n"
    packed.write_bytes(gzip.compress(b"a,b\n1,3\n"))
    assert verify_restore._unpacked_copy(packed, ".gz", recorded, "tower.csv", scratch, 1) is None
    assert list((scratch / "restored-input-1").iterdir()) == []


def test_the_lock_holder_is_read_from_proc_locks_lines():
    """The lines of /proc/locks as proc(5) shows them: the holder's FLOCK line names the
    process; a waiter's ``->`` line, another file's line, a POSIX lock and a process id 0
    (a process this one cannot name, said "process 0" before) do not."""
    place = "fe:00:2260995"
    lines = ["1: POSIX  ADVISORY  WRITE 300 fe:00:2260995 0 EOF",
             "2: FLOCK  ADVISORY  WRITE 0 fe:00:2260995 0 EOF",
             "3: FLOCK  ADVISORY  WRITE 400 fe:00:226099 0 EOF",
             "4: FLOCK  ADVISORY  WRITE 17964 fe:00:2260995 0 EOF",
             "4: -> FLOCK  ADVISORY  WRITE 18000 fe:00:2260995 0 EOF"]
    assert flock_holder(lines, place) == 17964
    assert flock_holder(lines[:3] + lines[4:], place) is None


def test_the_folder_the_run_wrote_is_not_named_as_another(copy):
    """A result whose manifest is gone, given as ``r/../r`` or through a link, was told
    "its run log says the run wrote 'r'" as if that were another folder (a copy's
    source); the same folder is no longer named so, a copy still is."""
    out = copy / "out"
    (out / "manifest.json").unlink()
    log = (out / "run-log.json").read_text(encoding="utf-8")
    wrote = json.loads(log)["result_folder"]
    shutil.copytree(out, copy / "moved")
    (copy / "moved" / "run-log.json").write_text(
        log.replace(json.dumps(wrote)[1:-1],
                    json.dumps(str(copy / "moved"))[1:-1]), encoding="utf-8")
    assert "run log says" not in lost_manifest_remedy(copy / "moved" / ".." / "moved")
    try:
        os.symlink(copy / "moved", copy / "link")
    except OSError:   # a system where links need a privilege (Windows)
        pass
    else:
        assert "run log says" not in lost_manifest_remedy(copy / "link")
    (copy / "moved" / "run-log.json").write_text(log, encoding="utf-8")
    assert f"run log says the run wrote {wrote!r}" in lost_manifest_remedy(copy / "moved")


@pytest.mark.parametrize("missing", ["bz2", "lzma"])
def test_a_python_without_an_optional_compression_module_is_not_broken(tmp_path, monkeypatch,
                                                                        missing):
    """bz2 and lzma are optional in a Python build: verify imported them where it met a
    compressed file and failed with ImportError; now such a file is only not unpacked."""
    monkeypatch.setattr(verify_restore, missing, None)
    suffix = {"bz2": ".bz2", "lzma": ".xz"}[missing]
    head = dict((s, m) for m, s in verify_restore.PACKED_FORMS)[suffix]
    path = tmp_path / f"tower.csv{suffix}"
    path.write_bytes(head + b"not a stream")
    assert verify_restore._unpacked(path) is None
    assert verify_restore._restored_text(path, "0" * 64, tmp_path, 0) is None


@pytest.mark.skipif(not os.path.isdir("/proc/self/fd"), reason="Linux /proc only")
def test_a_process_named_by_proc_locks_must_hold_the_lock_file_open(tmp_path, monkeypatch):
    """/proc/locks names a file by device and inode numbers alone (proc(5)), which can
    be another file's (btrfs subvolumes repeat inode numbers under one device number),
    and its process may end, its id reused, before the note is written: a process that
    does not have the lock file open is not named as its holder."""
    from fluxpart import resultdir

    path = tmp_path / ".out.lock"
    path.write_bytes(b"")
    monkeypatch.setattr(resultdir, "flock_holder", lambda lines, place: os.getpid())
    monkeypatch.setattr(resultdir.Path, "read_text", lambda self, *a, **k: "")
    assert resultdir.lock_holder(path) is None
    with open(path, "rb"):
        assert resultdir.lock_holder(path) == (os.getpid(), False)
    assert resultdir.lock_holder(path) is None
