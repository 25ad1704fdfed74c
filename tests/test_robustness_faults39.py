"""Faults found by round faults39 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

from fluxpart.cli import main
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


def test_an_input_too_large_to_parse_is_named_with_its_size_and_lines(copy, monkeypatch,
                                                                     capsys):
    """Ten years of 1-minute records (5.3 million lines, 272 MB) read, then parsed out of
    memory under ``ulimit -v`` 1.5 GB: "ran out of memory ... give the process more
    memory", though with more memory (2.6 GB) the file is refused after 80 s as not 30-
    or 60-minute records. Now the line names the file, its size and lines beside a
    half-hourly year's 17,520 records (365 x 48: fact of the trade). The parse's
    MemoryError is injected here."""
    import fluxpart.io as io

    def out_of_memory(*args, **kwargs):
        raise MemoryError

    monkeypatch.setattr(io, "read_table", out_of_memory)
    code = main(["check", str(copy / "site.toml")])
    said = [line for line in capsys.readouterr().err.splitlines() if line.startswith("error:")]
    lines = (copy / "tower.csv").read_bytes().count(b"\n")
    assert code == 2 and len(said) == 1, said
    assert "'tower.csv'" in said[0] or "tower.csv'" in said[0]
    assert f"{lines:,} lines" in said[0] and "17,520" in said[0], said[0]
