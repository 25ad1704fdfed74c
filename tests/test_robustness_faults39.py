"""Faults found by round faults39 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

from fluxpart.manifest import read_manifest
from fluxpart.resultdir import check_folder, replace_refusal


def test_a_file_named_report_in_a_result_is_kept_and_named(copy):
    """A user's note saved as a file named ``report`` in a result folder (where `report`
    draws its folder): `run --out` into the folder deleted the note without a word, and
    `verify` said the entry "is not a plain file or folder" of a plain file. Now the run
    is refused (the note is none of a run's entries) and verify says what the entry is
    and what the result keeps there. Common practice: a writer never deletes a file it
    did not write."""
    folder = copy / "out"
    (folder / "report").write_text("my notes\n")
    refusal = replace_refusal(folder)
    assert refusal is not None and "'report'" in refusal
    said = [p.detail for p in check_folder(folder, read_manifest(folder))
            if p.file == "report"]
    assert said == ["is a plain file, where the result keeps the folder a report is "
                    "drawn into"]
    (folder / "report").unlink()
    (folder / "report").mkdir()
    assert replace_refusal(folder) is None
