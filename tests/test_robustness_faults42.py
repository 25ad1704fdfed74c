"""Result safety and a portable verify, probed again by round faults42 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import hashlib
import json

import pandas as pd
import pyarrow.parquet as pq
import pytest

from fluxpart.cli import main


def _strict(text):
    """JSON as RFC 8259 defines it: Python's reader with NaN and Infinity refused."""
    return json.loads(text, parse_constant=lambda name: pytest.fail(f"{name} in JSON"))


def test_a_table_recompressed_with_its_values_says_they_are_the_reruns(copy, capsys):
    """A table rewritten by pyarrow with another compression (gzip; its values and
    fluxpart's metadata kept): verify said "daily.parquet was changed after it was
    written" and nothing more, so an auditor could not tell whether a number had changed.
    Now the values and metadata read back (Apache Parquet's round trip of values and
    key-value metadata, pyarrow's ``write_table`` (m)) are said to equal the rerun's; the
    verdict stays NOT reproduced (exit 1), the file not being the one written. Read
    through ``verify --json`` (new), which an auditor's script parses: one strict JSON
    object with the verdict, the exit status and each difference's fields."""
    folder = copy / "out"
    table = pq.read_table(folder / "daily.parquet")
    pq.write_table(table, folder / "daily.parquet", compression="gzip")
    assert main(["verify", "--json", str(folder)]) == 1
    report = _strict(capsys.readouterr().out)
    assert (report["verdict"], report["exit_code"], report["recomputed"]) == (
        "not reproduced", 1, True)
    assert [(d["table"], d["kind"], d["relative"]) for d in report["differences"]] == [
        ("daily", "hash", None)]
    assert report["folder_changes"] == ["daily.parquet changed after it was written"]
    assert any(note.startswith("daily: the changed file's values and metadata are "
                               "bit-identical to the rerun's") for note in report["notes"])
    assert report["caution"] in report["text"][-1]
    _assert_recorded(report, copy / "tower.csv")


def _assert_recorded(report, input_file):
    """``recorded`` holds the input's whole SHA-256 (the ``result`` line shows 12
    characters: review64), as FIPS 180-4 SHA-256 of the file's bytes (hashlib)."""
    recorded = report["recorded"]
    assert recorded["input"]["sha256"] == hashlib.sha256(input_file.read_bytes()).hexdigest()
    assert recorded["input"]["sha256"][:12] in report["result"]
    assert len(recorded["site_config"]["sha256"]) == 64
    assert isinstance(recorded["seed"], int) and recorded["fluxpart"] in report["result"]


def test_a_pandas_rewritten_table_not_recomputed_claims_no_comparison(copy, capsys):
    """A table rewritten by pandas (`read_parquet` then `to_parquet`) in a folder whose
    input is not at hand: verify said "its values were compared with the rerun's (see the
    note)" while nothing was recomputed and no such note followed. Now it says the values
    are compared where the result is recomputed, and the note says none was."""
    folder = copy / "out"
    pd.read_parquet(folder / "daily.parquet").to_parquet(folder / "daily.parquet")
    (copy / "tower.csv").rename(copy / "elsewhere.csv")
    assert main(["verify", str(folder)]) == 1
    out = capsys.readouterr().out
    assert "daily.parquet was rewritten by another program" in out
    assert "were compared with the rerun" not in out
    assert "where the result is recomputed" in out and "not recomputed" in out


def test_netcdf_given_as_a_link_is_written_through_it_and_the_link_kept(copy, capsys):
    """``export --netcdf latest.nc`` where latest.nc is a symbolic link to the file on
    another disk: the temporary file was renamed over the link (rename(2) replaces the
    name, not what a link leads to (m)), so the link became a file and the shared file
    kept the earlier export (or none), under "wrote latest.nc". Now the file the link leads to is
    replaced and the link kept; a link into a folder that does not exist (a share not
    mounted) is one error line, the link kept."""
    pytest.importorskip("xarray")
    folder = copy / "out"
    shared = copy / "shared"
    shared.mkdir()
    link = copy / "latest.nc"
    link.symlink_to(shared / "site.nc")
    unmounted = copy / "unmounted.nc"
    unmounted.symlink_to(copy / "share" / "site.nc")
    assert main(["export", str(folder), "--netcdf", str(unmounted)]) == 2
    err = capsys.readouterr().err
    assert "does not exist (a disk or share not mounted?)" in err and unmounted.is_symlink()
    assert main(["export", str(folder), "--netcdf", str(link)]) == 0
    assert "through the link" in capsys.readouterr().out
    assert link.is_symlink() and [p.name for p in shared.iterdir()] == ["site.nc"]


def test_a_stopped_runs_staging_folder_given_to_verify_names_the_result(copy, capsys):
    """The unfinished folder a run killed outright (kill -9, a power cut) leaves beside
    its output, ``.out.staging-xxxxxxxx`` (tempfile.mkdtemp's 8 characters), seen with
    ``ls -a`` and given to verify: "not a fluxpart result folder" alone did not say where
    the result is. Now the folder it was writing is named."""
    staging = copy / ".out.staging-k2x_9qzt"
    staging.mkdir()
    (staging / "annual.parquet").write_bytes((copy / "out" / "annual.parquet").read_bytes())
    assert main(["verify", str(staging)]) == 2
    err = capsys.readouterr().err
    assert "not a fluxpart result folder" in err
    assert f"left while writing {str(copy / 'out')!r}, not a result" in err


def test_verify_json_of_a_folder_not_recomputed_says_so(copy, capsys):
    """``verify --json`` of a folder whose table changed and whose input is not at hand:
    nothing recomputed (``recomputed`` false), the table named, exit 1; strict JSON."""
    folder = copy / "out"
    table = pq.read_table(folder / "annual.parquet")
    pq.write_table(table, folder / "annual.parquet", compression="gzip")
    (copy / "tower.csv").rename(copy / "elsewhere.csv")
    assert main(["verify", "--json", str(folder)]) == 1
    failed = _strict(capsys.readouterr().out)
    assert (failed["verdict"], failed["exit_code"], failed["recomputed"]) == (
        "not reproduced", 1, False)
    assert [(d["table"], d["kind"]) for d in failed["differences"]] == [("annual", "hash")]
    _assert_recorded(failed, copy / "elsewhere.csv")
