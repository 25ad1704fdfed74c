"""Result safety of a network folder found open by round faults45 (invented data only).

Each test fails on the code before the fix it names; none starts a Dask cluster. The
references are SHA-256 (FIPS 180-4, through :mod:`hashlib`) for the failures table's
seal entry and the exit statuses and one-line errors the command line documents.
"""
from __future__ import annotations

import hashlib
import json
import subprocess
import sys

import pandas as pd
import pytest

from fluxpart import batch
from fluxpart.cli import main
from fluxpart.errors import InputFileError
from fluxpart.network_tables import FAILURES_FILE, network_table
from fluxpart.verify_network import verify_network


def _sealed_network(out):
    """A sealed batch folder with no computed site and one failed one, as the batch's own
    writer leaves it (no cluster)."""
    outcome = batch.run_site("broken", out.parent / "nowhere.toml", out / "broken")
    assert outcome.status == "failed"
    out.mkdir(exist_ok=True)
    batch._write_network([outcome], out)
    return out


def test_an_edited_failures_table_breaks_the_network_seal(tmp_path):
    """``network.json`` recorded ``failures.parquet``'s SHA-256 but nothing compared it:
    a failures table rewritten (a site said failed that was not, a row dropped) was read
    and shown as the batch's own. Now read_network refuses it, naming the file."""
    out = _sealed_network(tmp_path / "net")
    seal = json.loads((out / "network.json").read_text())
    assert seal["failures"] == hashlib.sha256((out / FAILURES_FILE).read_bytes()).hexdigest()
    with pytest.warns(batch.FluxpartWarning, match="'broken'"):
        assert batch.read_network(out).attrs["failed_sites"].keys() == {"broken"}
    failures = pd.read_parquet(out / FAILURES_FILE).reset_index()
    failures["site"] = "north-tower"                 # relabelled
    batch.write_table(failures.set_index("site"), out / FAILURES_FILE,
                      batch._FAILURE_COLUMNS, "failures")
    with pytest.raises(InputFileError, match=r"failures.parquet in .* is not the file the "
                       r"batch recorded in network.json"):
        network_table(out, "daily")
    failures.set_index("site").to_parquet(out / FAILURES_FILE)   # another tool's rewrite
    report = verify_network(out)
    assert report.seal_problem.startswith("failures.parquet in ") and report.failed == ()
    assert report.exit_code == 1
    (out / FAILURES_FILE).unlink()
    with pytest.raises(InputFileError, match=r"failures.parquet is missing from .*, while "
                       r"network.json records it \(deleted or moved\)"):
        batch.read_network(out)


def test_a_network_seal_saved_with_a_byte_order_mark_is_read_as_written(tmp_path):
    """network.json re-saved by a Windows editor (a UTF-8 byte-order mark, CRLF, or as
    UTF-16) was called damaged, "cut short or edited", while a manifest so saved is read
    as written (its encoding told as RFC 4627 section 3 lays down)."""
    out = _sealed_network(tmp_path / "net")
    path = out / "network.json"
    text = path.read_text(encoding="utf-8").replace("\n", "\r\n")
    for data in (b"\xef\xbb\xbf" + text.encode(), text.encode("utf-16")):
        path.write_bytes(data)
        with pytest.warns(batch.FluxpartWarning, match="'broken'"):
            assert len(batch.read_network(out)) == 0
        assert verify_network(out).failed[0][0] == "broken"


def test_verify_of_a_network_reads_its_tables_without_the_batch_module():
    """verify_network imported batch's private ``_network_table`` (and with it Dask's
    batch machinery); the reader is now public in fluxpart.network_tables and verify
    loads no batch module."""
    code = ("import sys, fluxpart.verify_network as v, fluxpart.network_tables as t; "
            "print('fluxpart.batch' in sys.modules, t.network_table.__doc__ is not None)")
    shown = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                           check=True).stdout.split()
    assert shown == ["False", "True"]


@pytest.mark.parametrize("address", ["", "  "])
def test_an_empty_scheduler_address_is_one_error_line(address, tmp_path, capsys):
    """``--scheduler ""`` (an unset shell variable) ran a local cluster without a word;
    now one error: line naming the option, exit 2, no output folder made."""
    (tmp_path / "tower.toml").write_text("[site]\n")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["tower.toml"]\nout = "net"\n')
    assert main(["batch", str(sites), "--scheduler", address]) == 2
    captured = capsys.readouterr()
    assert captured.err.startswith(f"error: --scheduler {address!r}: an empty address")
    assert len(captured.err.strip().splitlines()) == 1
    assert not (tmp_path / "net").exists()


def test_a_stop_as_verify_makes_its_scratch_folder_leaves_none(tmp_path, monkeypatch):
    """SIGTERM sent as verify's scratch folder appeared left it in the temporary folder
    (once in 15 tries): the stop came between ``mkdtemp`` and the registration of its removal
    (Python's tempfile.TemporaryDirectory makes the folder first (m)). Simulated here by a
    stop raised right after the folder is made."""
    import tempfile

    from fluxpart import verify

    def stopped_as_made(prefix):
        tempfile.mkdtemp(prefix=prefix)
        raise KeyboardInterrupt

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    monkeypatch.setattr(tempfile, "TemporaryDirectory", stopped_as_made)
    with pytest.raises(KeyboardInterrupt), verify.scratch_folder():
        pass
    assert list(tmp_path.iterdir()) == []
    monkeypatch.undo()
    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    with pytest.raises(KeyboardInterrupt), verify.scratch_folder() as scratch:
        (scratch / "table.parquet").write_bytes(b"x")
        raise KeyboardInterrupt
    assert list(tmp_path.iterdir()) == []
