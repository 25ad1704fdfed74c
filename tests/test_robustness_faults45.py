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
    (out / FAILURES_FILE).unlink()
    with pytest.raises(InputFileError, match=r"failures.parquet in .* is missing"):
        batch.read_network(out)


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
