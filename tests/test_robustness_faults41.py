"""Faults of a network run on Dask found by round faults41 (invented data only).

Each test fails on the code before the fix it names; none starts a Dask cluster.
"""
from __future__ import annotations

import os

import pytest

from fluxpart import batch
from fluxpart.cli import main
from fluxpart.errors import ConfigError


@pytest.mark.parametrize("kind", ["pipe", "dangling link", "folder"])
def test_a_listed_site_config_that_is_no_file_is_named_by_its_kind(kind, tmp_path):
    """A site config listed by its path (no glob) that is a named pipe (a leftover
    ``mkfifo``), a link to a share that is not mounted, or a folder: the network file was
    refused with "no such file '...'", wrong for an entry the user sees with ``ls``
    (a glob's match of such an entry was already named, round faults34). Now its kind,
    as stat(2) tells it (POSIX.1-2017 <sys/stat.h> file types (m))."""
    entry = tmp_path / "tower.toml"
    if kind == "pipe":
        os.mkfifo(entry)
    elif kind == "dangling link":
        entry.symlink_to(tmp_path / "unmounted" / "tower.toml")
    else:
        entry.mkdir()
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["tower.toml"]\nout = "net"\n')
    with pytest.raises(ConfigError) as caught:
        batch.read_sites_file(sites)
    text = str(caught.value)
    assert "no such file" not in text and "sites[0]" in text
    assert {"pipe": "a named pipe", "dangling link": "which does not exist",
            "folder": "a folder"}[kind] in text
    missing = tmp_path / "SITES2.toml"
    missing.write_text('[batch]\nsites = ["gone.toml"]\nout = "net"\n')
    with pytest.raises(ConfigError, match="no such file"):
        batch.read_sites_file(missing)


class _Cluster:
    """A client's view of a scheduler whose workers have the given states
    (``Client.scheduler_info()["workers"][address]["status"]``, Dask 2026.8)."""

    def __init__(self, *states):
        self.states = states

    def scheduler_info(self, n_workers=-1):
        return {"workers": {f"tcp://127.0.0.1:{4000 + i}": {"status": s}
                            for i, s in enumerate(self.states)}}


def test_workers_paused_at_their_memory_limit_count_as_none():
    """``dask worker --memory-limit 150MB``: fluxpart's imports alone took 136 MiB of its
    143, Dask paused the worker (above ``distributed.worker.memory.pause``, 80 % (Dask
    documentation, "Worker Memory Management" (m))) and the batch waited without a word
    and without end (stopped by `timeout` after 90 s; the site time limit counts only
    started sites). Now such workers count as none, so the no-worker note comes after
    its wait; running workers count as before."""
    assert batch._worker_count(_Cluster("paused", "paused")) == 0
    assert batch._worker_count(_Cluster("paused", "running")) == 1
    assert batch._worker_count(_Cluster("Status.closing_gracefully", None)) == 1
    wait = batch._NO_WORKER_NOTE_SECONDS
    note = batch._no_worker_note(0.0, wait, "tcp://127.0.0.1:8931")
    assert "paused" in note and "--memory-limit" in note


def test_a_site_whose_worker_died_names_the_memory_limit_of_an_existing_cluster():
    """Each try of a site killed by Dask's nanny at the worker's memory limit (95 %,
    ``distributed.worker.memory.terminate`` (m)) on an existing cluster: the line said
    "the kernel's OOM killer" and "with fewer --workers", an option refused with
    --scheduler. Now it names the nanny and ``dask worker --memory-limit`` too."""
    class KilledWorker(Exception):
        pass

    common = {"key": "fen", "config": "fen.toml", "directory": "net/fen"}
    error = KilledWorker("Attempted to run task 'fluxpart-site-fen' on 4 different workers")
    outcome = batch._lost_site(batch._failure(common, error), error)
    assert outcome.error == "WorkerLostError" and not outcome.traceback
    assert "--memory-limit" in outcome.message and "nanny" in outcome.message
    assert "--workers" in outcome.message


def test_an_unusable_dask_scratch_folder_leaves_no_new_output_folder(tmp_path, capsys):
    """``DASK_TEMPORARY_DIRECTORY`` naming a folder that does not exist: the one line was
    right (round faults26), but the batch had made its new, empty ``--out`` first. Now
    nothing is made (known truth: the folder was absent before)."""
    import dask

    config = tmp_path / "fen.toml"
    config.write_text("[site]\n")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["fen.toml"]\nout = "net"\n')
    with dask.config.set({"temporary-directory": str(tmp_path / "gone")}):
        assert main(["batch", str(sites), "--workers", "1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "temporary-directory" in err[0], err
    assert not (tmp_path / "net").exists()
