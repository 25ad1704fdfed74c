"""Result safety found open by round faults49 (invented data only).

Each test fails on the code before the fix it names. The references are Python's
documentation of ``signal`` (a handler's exception is raised in the main thread between
two bytecode instructions, so a stop can come right after ``mkdir`` returned) and of
``zipfile`` (the zip format, PKWARE's APPNOTE (m)); SHA-256 (FIPS 180-4, through
:mod:`hashlib`) deciding that an archive holds the recorded input; zstd's ``-d`` to
unpack (its manual page (m)); and the exit statuses and one-line errors the command line
documents.
"""

from __future__ import annotations

import hashlib
import os
import zipfile

import pandas as pd
import pytest

from fluxpart import resultdir
from fluxpart.cli import main
from fluxpart.store import atomic_write_bytes
from fluxpart.verify_restore import _packed_beside, _packed_not_taken


def _stopped_after(real, marker):
    """`real` (os.mkdir or os.open) that does its work, then raises KeyboardInterrupt
    where the path holds `marker`: a Ctrl-C or a SIGTERM handler's exception coming the
    moment the folder or file exists, before the call returned."""
    def call(path, *args, **kwargs):
        done = real(path, *args, **kwargs)
        if marker in os.fsdecode(path):
            if isinstance(done, int):
                os.close(done)
            raise KeyboardInterrupt
        return done
    return call


def test_a_stop_as_the_staging_folder_is_made_leaves_nothing(tmp_path, monkeypatch):
    """A stop right after the staging folder was made (inside ``tempfile.mkdtemp`` before)
    left ``.out.staging-xxxxxxxx`` beside the result (a report's inside the result: one
    SIGHUP in three sent as it appeared). Now the earlier result stays whole and nothing
    is left beside it."""
    out = tmp_path / "out"
    resultdir.write_folder(out, {"annual": pd.DataFrame({"nee": [1.0]})}, site={},
                           config={}, seed=0, provenance={})
    before = sorted(p.name for p in tmp_path.iterdir())
    monkeypatch.setattr(os, "mkdir", _stopped_after(os.mkdir, ".staging-"))
    with pytest.raises(KeyboardInterrupt):
        resultdir.write_folder(out, {"annual": pd.DataFrame({"nee": [2.0]})}, site={},
                               config={}, seed=0, provenance={})
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    assert pd.read_parquet(out / "annual.parquet")["nee"].tolist() == [1.0]
    with pytest.raises(KeyboardInterrupt), resultdir.staged(tmp_path / "page"):
        pass
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_a_stop_as_a_temporary_file_is_made_leaves_nothing(tmp_path, monkeypatch):
    """The same stop inside ``tempfile.mkstemp`` left ``.NAME.xxxxxxxx.tmp`` beside the
    file written; now the earlier file stays and nothing is left."""
    target = tmp_path / "site.json"
    target.write_bytes(b"old")
    monkeypatch.setattr(os, "open", _stopped_after(os.open, ".tmp"))
    with pytest.raises(KeyboardInterrupt):
        atomic_write_bytes(target, b"new")
    assert [p.name for p in tmp_path.iterdir()] == ["site.json"]
    assert target.read_bytes() == b"old"


def test_no_staging_folder_is_an_output_error_naming_the_folder(tmp_path, monkeypatch):
    """Where nothing can be made beside the output the error still names the folder, as
    before the staging folder was made under the clean-up's guard."""
    def refused(path, *args, **kwargs):
        raise PermissionError(13, "Permission denied", os.fsdecode(path))
    monkeypatch.setattr(os, "mkdir", refused)
    with pytest.raises(resultdir.OutputError, match="cannot write beside the output folder"):
        resultdir.write_folder(tmp_path / "out", {"annual": pd.DataFrame({"nee": [1.0]})},
                               site={}, config={}, seed=0, provenance={})


TEXT = b"stamp,nee\n202101010030,1.5\n202101010100,-2.25\n"


@pytest.mark.parametrize("archive_name", ["tower.csv.zip", "tower.zip"])
def test_an_input_zipped_after_the_run_is_restored(tmp_path, archive_name):
    """``zip -m tower.csv.zip tower.csv`` and a Windows compressed folder ``tower.zip``
    after the run were "does not exist; give --input", though run reads a zip of one
    table; now the one file is unpacked and taken where it has the recorded SHA-256, also
    re-saved with CRLF inside the archive. A zip of other bytes is not taken and named."""
    sha = hashlib.sha256(TEXT).hexdigest()
    recorded = tmp_path / "tower.csv"
    for data in (TEXT, TEXT.replace(b"\n", b"\r\n")):
        with zipfile.ZipFile(tmp_path / archive_name, "w", zipfile.ZIP_DEFLATED) as packed:
            packed.writestr("tower.csv", data)
        archive, restored = _packed_beside(recorded, sha, tmp_path / "scratch", 0)
        assert archive.name == archive_name and restored.read_bytes() == TEXT
    with zipfile.ZipFile(tmp_path / archive_name, "w") as packed:
        packed.writestr("tower.csv", TEXT[:-6] + b"9.25\n")
    assert _packed_beside(recorded, sha, tmp_path / "scratch2", 0) is None
    assert f"'{archive_name}' beside it does not hold" in _packed_not_taken(recorded)


def test_a_zip_of_another_file_or_of_two_is_not_taken(tmp_path):
    """A zip beside the input whose one file has other bytes, or which holds two files
    none of the input's name, is no copy of the input (one of another name with the recorded bytes is: round
    review96, the SHA-256 decides; tests/test_robustness_review96.py)."""
    sha = hashlib.sha256(TEXT).hexdigest()
    with zipfile.ZipFile(tmp_path / "tower.csv.zip", "w") as packed:
        packed.writestr("other.csv", TEXT + b"202101010130,0.5\n")
    assert _packed_beside(tmp_path / "tower.csv", sha, tmp_path / "s", 0) is None
    with zipfile.ZipFile(tmp_path / "tower.csv.zip", "w") as packed:
        packed.writestr("tower_a.csv", TEXT)     # none of the input's name (review96)
        packed.writestr("notes.csv", TEXT)
    assert _packed_beside(tmp_path / "tower.csv", sha, tmp_path / "s", 0) is None


def test_an_input_packed_by_an_unread_tool_is_named_with_its_command(tmp_path):
    """``zstd --rm tower.csv`` after the run: "does not exist" alone, tower.csv.zst in
    sight; now the file and its unpacking command are named."""
    (tmp_path / "tower.csv.zst").write_bytes(b"\x28\xb5\x2f\xfd" + b"\0" * 20)
    said = _packed_not_taken(tmp_path / "tower.csv")
    assert "'tower.csv.zst' beside it is compressed with zstd" in said
    assert "zstd -d tower.csv.zst" in said


def test_verify_of_a_result_whose_input_was_zipped(copy, capsys):
    """End to end: the input zipped after the run; verify exit 0 with a note naming the
    archive, also with the archive given as --input; the archive of a changed input is
    one ``error:`` line, exit 2."""
    data = (copy / "tower.csv").read_bytes()
    (copy / "tower.csv").unlink()
    with zipfile.ZipFile(copy / "tower.csv.zip", "w", zipfile.ZIP_DEFLATED) as packed:
        packed.writestr("tower.csv", data)
    assert main(["verify", str(copy / "out")]) == 0
    assert "'tower.csv.zip' beside it holds its recorded bytes" in capsys.readouterr().out
    # given with --input, as `--input tower.csv.gz` is (it was "NOT reproduced": another
    # SHA-256)
    (copy / "tower.csv.zip").rename(copy / "archive.zip")
    assert main(["verify", "--quiet", str(copy / "out"), "--input",
                 str(copy / "archive.zip")]) == 0
    (copy / "archive.zip").rename(copy / "tower.csv.zip")
    capsys.readouterr()
    with zipfile.ZipFile(copy / "tower.csv.zip", "w") as packed:
        packed.writestr("tower.csv", data[:-300])
    assert main(["verify", "--quiet", str(copy / "out")]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "'tower.csv.zip' beside it does not hold" in err


def test_a_stop_as_a_csv_exports_staging_is_made_leaves_nothing(copy, tmp_path, monkeypatch):
    """The CSV export's staging folder ``.csv.xxxxxxxx.tmp`` made inside ``mkdtemp`` was
    left by a stop the moment it existed (until the next export swept it); now it is
    removed and no CSV folder is written. (The first ``.tmp`` folder is the export's
    probe of the place, removed at once.)"""
    from fluxpart.export_csv import write_csv

    parent = tmp_path / "exports"
    parent.mkdir()
    real, calls = os.mkdir, []

    def stopping(path, *args, **kwargs):
        real(path, *args, **kwargs)
        if os.fsdecode(path).endswith(".tmp"):
            calls.append(path)
            if len(calls) == 2:
                raise KeyboardInterrupt
    monkeypatch.setattr(os, "mkdir", stopping)
    with pytest.raises(KeyboardInterrupt):
        write_csv(copy / "out", parent / "csv")
    assert len(calls) == 2 and list(parent.iterdir()) == []
