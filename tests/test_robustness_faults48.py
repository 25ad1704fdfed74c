"""Faults found by round faults48 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import subprocess
import sys

import pytest

import fluxpart.resultdir as resultdir
from fluxpart.errors import InputFileError
from fluxpart.resultdir import lock_file, recover_missing

#: Another process holding a folder's lock (argv[1]) until its standard input closes.
_HOLDER = """
import sys
from fluxpart.resultdir import folder_lock
with folder_lock(sys.argv[1], 0):
    print("held", flush=True)
    sys.stdin.read()
"""


@pytest.fixture
def left_aside(tmp_path):
    """What a writer stopped between the two renames of its swap leaves (a file system
    without an atomic exchange): no folder, the earlier result in its retired copy. Only
    its manifest file matters to the repair."""
    retired = tmp_path / ".out.retired-0a1b2c3d"
    retired.mkdir()
    (retired / "manifest.json").write_text("{}\n")
    return tmp_path / "out", retired


@pytest.fixture
def holder(left_aside):
    """A second process holding the lock of the folder left aside."""
    proc = subprocess.Popen([sys.executable, "-c", _HOLDER, str(left_aside[0])],
                            stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "held"
    yield proc
    proc.stdin.close()
    proc.wait(timeout=30)


def test_a_reader_waiting_to_put_a_result_back_says_for_whom(left_aside, holder, capsys,
                                                               monkeypatch):
    """verify, report, export and diff put back a result a writer left in its retired
    copy; with the folder's lock held by another process they waited 30 s without a word
    (also without --quiet), then said "could not be moved back (read-only place?)" and
    advised renaming the copy, under a writer that may be between its two renames. Now
    the wait is said on stderr naming the holder (common practice: a program that waits
    on another says so), and the error names the holder and advises no rename."""
    folder, retired = left_aside
    monkeypatch.setattr(resultdir, "_REPAIR_WAIT", 0.5)
    with pytest.raises(InputFileError) as caught:
        recover_missing(folder)
    waited = capsys.readouterr().err
    assert "waiting up to 0.5 s" in waited and f"process {holder.pid}" in waited
    message = str(caught.value)
    assert f"process {holder.pid}" in message and "holds its lock" in message
    assert "read-only" not in message and "rename it" not in message
    assert retired.is_dir() and not folder.exists()         # nothing moved under the holder


def test_a_reader_puts_the_result_back_once_the_holder_ends(left_aside, holder, capsys):
    """The same wait ends when the holder does: the earlier result is put back and said."""
    folder, retired = left_aside
    import threading

    threading.Timer(0.5, holder.stdin.close).start()
    note = recover_missing(folder)
    err = capsys.readouterr().err
    assert "waiting" in err and note in err and "was missing" in note
    assert (folder / "manifest.json").is_file() and not retired.exists()
    assert not lock_file(folder).exists()


def test_a_siblings_staging_and_retired_folders_are_not_this_folders(tmp_path):
    """A run into ``r`` removed every folder beside it whose name began ``.r.staging-`` or
    ``.r.retired-``: also those of a sibling named ``r.staging-1`` or ``r.retired-2020``
    (a copy a user named so), under that sibling's live writer; and with ``r`` missing it
    moved the sibling's retired result in as ``r``. Only names as the writer makes them
    (a dot-free token after ``.r.staging-`` or ``.r.retired-``) are this folder's."""
    from fluxpart.resultdir import clean_leftovers, interrupted_writes

    own = [tmp_path / ".r.staging-k9x2m4qa", tmp_path / ".r.retired-0a1b2c3d"]
    others = [tmp_path / ".r.staging-1.staging-abcd1234",
              tmp_path / ".r.retired-2020.retired-0a1b2c3d"]
    for folder in own + others:
        folder.mkdir()
    (others[1] / "manifest.json").write_text("{}\n")      # the sibling's earlier result
    assert sorted(interrupted_writes(tmp_path / "r")) == sorted(p.name for p in own)
    clean_leftovers(tmp_path / "r")
    assert not (tmp_path / "r").exists()                  # not made from the sibling's copy
    assert [p.exists() for p in own + others] == [False, False, True, True]


def test_a_lost_run_log_is_noted_by_verify(tmp_path):
    """run-log.json (never hashed: who ran the result, when, where, how) deleted or left
    out of a copy: verify passed without a word, so an auditor took the trail to be
    there. Now a note says it is gone or unreadable; a present log gives none, and a
    manifest that lists no run log (an earlier release's) none either."""
    from fluxpart.verify_folder import _run_log_note

    manifest = {"unhashed": {"run-log.json": "who ran it"}}
    assert "is missing" in _run_log_note(tmp_path, manifest)
    (tmp_path / "run-log.json").write_text("[1")
    assert "cannot be read" in _run_log_note(tmp_path, manifest)
    (tmp_path / "run-log.json").write_text('{"user": "someone"}\n')
    assert _run_log_note(tmp_path, manifest) is None
    (tmp_path / "run-log.json").unlink()
    assert _run_log_note(tmp_path, {"unhashed": {}}) is None


def test_a_report_page_of_another_result_is_named(tmp_path):
    """report/ is not hashed, so a page copied in from another result (``cp -r`` of one
    result over another's) passed with only the general note that pages are not
    verified. The page names the manifest seal it was drawn from (its provenance table);
    verify now names a page whose seal is not the folder's. None for the folder's own
    page, a page without a seal (edited, or an earlier release's) or no page."""
    from fluxpart.verify_folder import _page_of_other_result

    own, other = "3b" * 32, "6e" * 32
    manifest = {"seal": own}
    assert _page_of_other_result(tmp_path, manifest) is None
    (tmp_path / "report").mkdir()
    page = tmp_path / "report" / "report.html"
    row = ('<tr><th scope="row">manifest seal</th><td><span class="hash">SHA-256 {}</span> '
           "(over manifest.json's content)</td></tr>")
    page.write_text(row.format(own))
    assert _page_of_other_result(tmp_path, manifest) is None
    page.write_text(row.format(other))
    note = _page_of_other_result(tmp_path, manifest)
    assert note and "another result" in note and other[:12] in note and own[:12] in note
    page.write_text("<html>edited</html>")
    assert _page_of_other_result(tmp_path, manifest) is None
