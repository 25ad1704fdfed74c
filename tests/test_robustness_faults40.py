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
