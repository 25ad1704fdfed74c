"""Faults of a network run on Dask found by round faults44 (invented data only).

Each test fails on the code before the fix it names; none starts a Dask cluster.
"""
from __future__ import annotations

import socket
import threading

import pytest

from fluxpart import batch
from fluxpart.errors import ConfigError


@pytest.fixture
def silent_service():
    """A TCP service on 127.0.0.1 that accepts connections and never answers (an HTTP
    server waiting for its request line, an ssh port): its address."""
    server = socket.socket()
    server.bind(("127.0.0.1", 0))
    server.listen(4)
    held, stop = [], threading.Event()

    def accept():
        server.settimeout(0.1)
        while not stop.is_set():
            try:
                held.append(server.accept()[0])
            except OSError:
                pass

    thread = threading.Thread(target=accept, daemon=True)
    thread.start()
    yield f"tcp://127.0.0.1:{server.getsockname()[1]}"
    stop.set()
    thread.join()
    for connection in held:
        connection.close()
    server.close()


def test_a_scheduler_address_where_no_dask_answers_ends_in_one_line_and_no_folder(
        silent_service, tmp_path, monkeypatch):
    """``--scheduler`` the address of a service that accepts the connection but speaks no
    Dask: Dask's client waited for its first answer for ever (the batch stopped by
    ``timeout`` after 120 s, a new empty ``--out`` left); and an address where nothing
    listens left that new folder behind its error line. Now the scheduler is asked for
    its identity within one deadline before the folder is made (Dask.distributed, ``rpc``
    and a server's ``identity`` handler (m))."""
    monkeypatch.setattr(batch, "_CONNECT_TIMEOUT_SECONDS", 1)
    tower = tmp_path / "tower.toml"
    tower.write_text("[site]\n")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["tower.toml"]\nout = "net"\n')
    with pytest.raises(ConfigError, match="no Dask scheduler answered within 1 s"):
        batch.run_batch(sites, scheduler=silent_service)
    assert not (tmp_path / "net").exists()


@pytest.mark.parametrize("address, said", [
    ("tcp://127.0.0.1", r"is not a Dask scheduler address \(ValueError: missing port"),
    ("http://127.0.0.1:8786", r"is not a Dask scheduler address \(ValueError: unknown address"),
    ("tls://127.0.0.1:9", r"needs Dask's TLS settings"),
])
def test_a_malformed_scheduler_address_is_named_as_such(address, said):
    """An address without a port or of an unknown scheme was said to be a scheduler that
    did not answer "within 10 s"; ``tls://`` without Dask's TLS settings ended in a
    TypeError traceback (exit 1). Each is now one line saying what is wrong."""
    with pytest.raises(ConfigError, match=said):
        batch.check_scheduler(address, seconds=1)


def test_network_tables_read_back_name_the_sites_that_failed(tmp_path):
    """A network whose sites all failed (or some): ``read_network`` returned the sites
    written (none: an empty table) without a word of those left out, which only
    ``failures.parquet`` named. Now a FluxpartWarning names each, and
    ``attrs["failed_sites"]`` holds their errors."""
    import pandas as pd

    failures = pd.DataFrame({"site": ["fen", "north-tower"], "config": ["f.toml", "n.toml"],
                             "error": ["ConfigError", "InputFileError"],
                             "message": ["[site] latitude = 200 is out of range", "no file"],
                             "kind": ["input", "input"]})
    out = tmp_path / "net"
    out.mkdir()
    for folder in batch.NETWORK_DATASETS.values():
        (out / folder).mkdir()
    batch.write_table(failures.set_index("site"), out / batch.FAILURES_FILE,
                      batch._FAILURE_COLUMNS, "failures")
    with pytest.warns(batch.FluxpartWarning, match=r"leave out 2 site\(s\).*'fen' "
                      r"\(ConfigError\), 'north-tower' \(InputFileError\)"):
        frame = batch.read_network(out, "daily")
    assert len(frame) == 0
    assert frame.attrs["failed_sites"]["fen"].startswith("ConfigError: [site] latitude")
