"""Faults found by round faults40 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import shutil
from pathlib import Path

from fluxpart.cli import main
from fluxpart.resultdir import recover_missing


def _killed_between_two_renames(folder):
    """What a run killed between the two renames of its swap leaves (a file system without
    an atomic exchange: NFS, SMB, FUSE): no folder, the earlier result in its retired copy
    and the new one in a staging folder (resultdir._swap_in)."""
    parent = folder.parent
    shutil.copytree(folder, parent / f".{folder.name}.staging-k1ll3d00")
    folder.rename(parent / f".{folder.name}.retired-k1ll3d00")


def test_a_run_killed_between_two_renames_is_repaired_and_said(copy):
    """kill -9 of `run` between moving the earlier result aside and moving the new one in:
    a reader put the earlier result back without a word (an auditor's verify then read
    as if nothing had happened) and left its lock file beside the folder. Common
    practice: a repair of a user's folder is reported, and a tool leaves no file of its
    own behind."""
    folder = copy / "out"
    _killed_between_two_renames(folder)
    said = []
    note = recover_missing(folder, notify=said.append)
    assert (folder / "manifest.json").is_file() and said == [note]
    assert "was missing" in note and ".out.retired-k1ll3d00" in note
    assert sorted(p.name for p in copy.iterdir() if p.name.startswith(".")) == []


def test_report_of_a_folder_a_killed_run_left_aside_does_not_wait_for_itself(
        copy, capsys, monkeypatch):
    """`report` of that folder held the folder's lock, then read_folder's repair waited
    30 s for the same lock and ended in "could not be moved back (read-only place?)",
    exit 2. Now the earlier result is put back (and said) before the lock is taken. The
    figures are not drawn here (only the folder is read, under the command's lock)."""
    import fluxpart.report as report
    from fluxpart.resultdir import read_folder

    def read_only(directory, out=None, progress=None):
        read_folder(directory)
        return Path(directory) / "report" / "report.html"

    monkeypatch.setattr(report, "build_report", read_only)
    monkeypatch.setattr("fluxpart.resultdir.DEFAULT_LOCK_TIMEOUT", 1.0)
    folder = copy / "out"
    _killed_between_two_renames(folder)
    assert main(["report", "--quiet", str(folder)]) == 0
    assert "was missing" in capsys.readouterr().err
    assert (folder / "manifest.json").is_file()


def test_a_second_stop_during_the_staging_removal_leaves_nothing(tmp_path, monkeypatch):
    """Ctrl-C pressed twice (or SIGTERM sent twice) during `run` or `report`: the first
    stop unwinds the writer, the second came while its staging folder was being removed
    and raised from inside the removal, leaving the folder with part of the tables beside
    the result. Here the second stop is raised by the first call of the removal. Common
    practice: clean-up finishes what it began (signal(7): a signal may arrive at any
    point of a handler's work (m))."""
    import fluxpart.resultdir as resultdir
    from fluxpart.resultdir import make_staging, swapped_in

    real, calls = shutil.rmtree, []

    def interrupted_once(path, *args, **kwargs):
        calls.append(path)
        if len(calls) == 1:
            raise KeyboardInterrupt         # the second Ctrl-C
        return real(path, *args, **kwargs)

    monkeypatch.setattr(resultdir.shutil, "rmtree", interrupted_once)
    folder = tmp_path / "out"
    folder.mkdir()
    (folder / "kept.txt").write_text("earlier\n")
    staging = make_staging(folder)
    try:
        with swapped_in(staging, folder):
            (staging / "daily.parquet").write_bytes(b"PAR1 part")
            raise KeyboardInterrupt             # the first Ctrl-C
    except KeyboardInterrupt:
        pass
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]
    assert (folder / "kept.txt").read_text() == "earlier\n"
