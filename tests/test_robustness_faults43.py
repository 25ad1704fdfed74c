"""Result safety and a portable verify, probed again by round faults43 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import json
from pathlib import Path

from fluxpart.cli import main
from fluxpart.verify import Difference, VerifyReport


def test_a_result_moved_on_its_machine_finds_its_input_where_the_run_read_it(copy, capsys):
    """A result moved into an archive folder on the machine that wrote it, its input left
    where it was: verify said the input "does not exist; give its new location with
    --input" (exit 2), though the run log records where the run was. Now the input is
    looked for there too and used only with the SHA-256 the manifest records (FIPS 180-4,
    the manifest's own check), with a note; a file there that changed is not taken."""
    moved = copy / "archive" / "2021" / "out"
    moved.parent.mkdir(parents=True)
    (copy / "out").rename(moved)
    assert main(["verify", "--json", str(moved)]) == 0
    report = json.loads(capsys.readouterr().out)
    assert report["verdict"] == "bit-identical"
    [note] = [n for n in report["notes"] if "where the run read it" in n]
    assert repr(str(copy / "tower.csv")) in note and repr(str(moved.parent / "tower.csv")) in note
    # another file of the input's name at the recorded place (review66): not reproduced,
    # as before, and the one with the recorded SHA-256 where the run read it is named
    other = moved.parent / "tower.csv"
    lines = (copy / "tower.csv").read_text().splitlines(keepends=True)
    lines[10] = lines[10].replace(".", ".9", 1)
    other.write_text("".join(lines))
    assert main(["verify", str(moved)]) == 1
    text = capsys.readouterr().out
    assert f"is where the run read it (run-log.json), {str(copy / 'tower.csv')!r}" in text
    other.unlink()
    with open(copy / "tower.csv", "a") as handle:           # the input changed since
        handle.write("\n")
    assert main(["verify", str(moved)]) == 2
    assert "give its new location with --input" in capsys.readouterr().err


def test_other_library_versions_beside_a_bit_identical_verdict_say_so():
    """Another pandas minor version installed than the run's: beside "bit-identical" the
    line read "numbers may differ in their last digits", a doubt the rerun had settled.
    Now it says every table is bit-identical all the same; where values differ within
    rounding, the caution stays."""
    line = ("pandas 3.0.4 is installed, the result was written with 3.1.1; numbers may "
            "differ in their last digits")
    identical = VerifyReport(directory=Path("r"), source="run", tables=("daily",),
                             environment=(line,))
    rounded = VerifyReport(directory=Path("r"), source="run", tables=("daily",),
                           environment=(line,),
                           rounding=(Difference("daily", "rounding", column="nee",
                                                relative=1e-15),))
    shown = [e for e in identical.format().splitlines() if e.startswith("environment:")]
    assert shown == ["environment: pandas 3.0.4 is installed, the result was written with "
                     "3.1.1; every table is bit-identical all the same"]
    assert json.loads(identical.as_json())["environment"] == [shown[0][len("environment: "):]]
    assert f"environment: {line}" in rounded.format().splitlines()


def test_several_inputs_found_where_the_run_read_them_are_each_named():
    """A result of two logger files moved on its machine: the note named the first file
    alone, "(the first) (the folder was moved ...)", so an auditor could not tell where
    the second was found (review66). Now every file and each folder is named."""
    from fluxpart.verify_inputs import _found_where_run_read

    moved = [(Path("/a/arch/logs/m_1.dat"), Path("/a/logs/m_1.dat")),
             (Path("/a/arch/logs/m_2.dat"), Path("/a/more/m_2.dat"))]
    note = _found_where_run_read(moved)
    assert note.startswith("2 input files (m_1.dat, m_2.dat): ")
    assert "in '/a/arch/logs' (the folder was moved" in note
    assert "(run-log.json), in '/a/logs', '/a/more', each with its recorded SHA-256" in note
