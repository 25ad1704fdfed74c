"""Result safety, portable verify and batch faults (round faults25).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit
2, nothing half-written or left behind; a batch site that fails is named alone, the
others and the network tables go on (exit 1). External facts used, each named beside its
check: SIGSTOP cannot be caught or ignored and holds a process until SIGCONT (POSIX
``signal.h`` (m)); Dask cancels every future of a client that loses its scheduler
(Dask.distributed documentation, "Managing Computation" (m)); ``Client.run`` gathers an
answer from every worker (Dask.distributed API documentation (m)). Invented Quillmoor
bundles only, for known-truth recovery.
"""

import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest
from bundles import make_bundle

distributed = pytest.importorskip("distributed")
import dask  # noqa: E402  (a dependency of distributed)

from fluxpart import batch  # noqa: E402
from fluxpart.cli import main  # noqa: E402

REPOSITORY = Path(__file__).resolve().parent.parent


def _env() -> dict:
    return {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(REPOSITORY), *filter(None, [os.environ.get("PYTHONPATH")])])}


# --------------------------------------------------------------------------- a lost scheduler

def test_a_scheduler_lost_mid_batch_fails_the_waiting_sites_by_name(tmp_path):
    """The scheduler of ``--scheduler`` killed while sites wait on it (a scheduler's node
    rebooted, the network to it failed): Dask cancels the client's futures (Dask
    documentation (m)), and the batch ended in a ``FuturesCancelledError`` traceback
    (exit 1) after the client's ERROR log, no network table written. Now each waiting
    site fails as ``SchedulerLostError`` naming the scheduler and the rerun, and the
    network tables and ``failures.parquet`` are written (known truth: no worker ever
    joins, so no site can have been computed)."""
    configs = [make_bundle(tmp_path / name, name=f"{name}.toml") for name in ("fen", "moor")]
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["fen/fen.toml", "moor/moor.toml"]\nout = "net"\n')
    scheduler_file = tmp_path / "scheduler.json"
    scheduler = subprocess.Popen(
        [sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1",
         "--port", "0", "--no-dashboard", "--dashboard-address", "127.0.0.1:0",
         "--scheduler-file", str(scheduler_file)], env=_env(), cwd=tmp_path,
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 60
        while not scheduler_file.exists() and time.monotonic() < deadline:
            time.sleep(0.2)
        reports: list = []
        before = dask.config.get("scheduler", None)
        with distributed.Client(scheduler_file=str(scheduler_file), timeout=30,
                                set_as_default=False) as probe:
            address = probe.scheduler.address
            running = threading.Thread(target=lambda: reports.append(
                batch.run_batch(sites, scheduler=address)), daemon=True)
            running.start()
            while (probe.run_on_scheduler(lambda dask_scheduler: len(dask_scheduler.tasks))
                   < 2 and time.monotonic() < deadline + 60):
                time.sleep(0.2)             # both sites queued on the scheduler
            scheduler.kill()                # SIGKILL, as a node's loss
        running.join(120)
        assert not running.is_alive()
        report = reports[0]
    finally:
        scheduler.kill()
        scheduler.wait(timeout=30)
    assert len(configs) == 2 and report.failed == 2 and report.exit_code == 1
    for outcome in report.outcomes:
        assert outcome.error == "SchedulerLostError", outcome
        assert address in outcome.message and "rerun" in outcome.message
        assert not (report.out / outcome.key).exists()     # nothing computed, nothing made
    assert (report.out / "failures.parquet").is_file()
    assert (report.out / "network.json").is_file()
    # the caller's dask settings as they were: a default client lost with its scheduler
    # leaves the process set to a distributed scheduler with none active, and a later dask
    # computation (an xarray export) fails "no Client active" (this test's own probe did)
    assert dask.config.get("scheduler", None) == before


def test_the_scheduler_lost_message_names_the_folder_state():
    """The message names the scheduler, the folder (earlier or whole new result: the
    swap is atomic, rename(2) (m)) and the fix; the error's traceback text is not kept."""
    error = batch.scheduler_lost_error("tcp://10.0.0.5:8786", RuntimeError("long\ntrace"))
    text = str(error)
    assert "tcp://10.0.0.5:8786" in text and "never half-written" in text
    assert "\n" not in text and "long" not in text


# --------------------------------------------------------------------------- a frozen worker

def _sleep_task(seconds):
    time.sleep(seconds)
    return seconds


def test_a_frozen_worker_does_not_stop_the_clients_look_at_running_sites():
    """A worker held by SIGSTOP (a paused container or virtual machine, a node swapping
    to a standstill; SIGSTOP cannot be caught, POSIX (m)) never answers ``Client.run``,
    which gathers every worker's answer (Dask documentation (m)): the batch's poll
    waited there without end, so neither ``--site-time-limit`` nor the no-worker note
    could fire (measured: a 0.2 min limit, still waiting after 6.6 min, stopped by
    ``timeout``). Now the question has a time limit and the scheduler's assignment
    answers instead: the frozen worker's site counts as running."""
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None,
                                  scheduler_kwargs={"dashboard_address": "127.0.0.1:0"}
                                  ) as cluster, \
            distributed.Client(cluster) as client:
        future = client.submit(_sleep_task, 120, key="fluxpart-site-frozen-0")
        deadline = time.monotonic() + 60
        while (future.key not in batch._running_now(client)
               and time.monotonic() < deadline):
            time.sleep(0.2)
        pid = next(iter(client.run(os.getpid).values()))
        os.kill(pid, signal.SIGSTOP)
        try:
            answer: list = []
            asking = threading.Thread(
                target=lambda: answer.append(batch._running_now(client, 2.0)), daemon=True)
            started = time.monotonic()
            asking.start()
            asking.join(30)
            assert not asking.is_alive(), "the look at the running sites hangs"
            assert time.monotonic() - started < 20
            assert answer == [{future.key}]
        finally:
            os.kill(pid, signal.SIGCONT)
            future.cancel()


# --------------------------------------------------------------------------- long site names

def test_a_site_config_of_a_long_name_gets_a_folder_that_fits(tmp_path):
    """A site config named with 240 bytes (legal: NAME_MAX is 255 on ext4, NTFS, APFS,
    common practice (m)) gave a site key of 240 bytes; its folder's staging name
    ``.KEY.staging-XXXXXXXX`` (18 bytes more) does not fit, so the site was computed
    and then failed with "choose a name of at most 237 bytes; choose another --out",
    neither of which the user can do for a key taken from a file name. Keys are now at
    most 200 bytes, cut ones ending in 8 hex digits of the name's SHA-256 (hashlib)."""
    import hashlib

    long_a, long_b = "k" * 240, "k" * 239 + "x"
    keys = batch._site_keys([tmp_path / f"{long_a}.toml", tmp_path / f"{long_b}.toml",
                             tmp_path / "fen.toml"])
    assert [len(k) for k in keys] == [200, 200, 3] and len(set(keys)) == 3
    assert keys[0].endswith(hashlib.sha256(long_a.encode()).hexdigest()[:8])
    assert keys[2] == "fen"                             # short keys as before
    assert all(len(f".{k}.staging-XXXXXXXX") <= 255 for k in keys)


# --------------------------------------------------------------------------- verify's umask

def test_verify_under_a_umask_taking_the_owners_access_is_named_before_computing(
        bundle, capsys, monkeypatch):
    """Under ``umask 777`` verify computed the whole rerun, then failed writing its
    scratch folder, its line ending "free space in the temporary folder ... or raise
    the file-size limit", neither of which helps. The mode of what is written is the
    mode asked for less the umask's bits (POSIX umask(2) (m)): the umask is now named
    before anything is computed, one line, exit 2 (as run, export and report do)."""
    from fluxpart import verify as verify_module

    def no_rerun(*args, **kwargs):
        raise AssertionError("the rerun was computed")

    monkeypatch.setattr(verify_module, "_recompute", no_rerun)
    old = os.umask(0o777)
    try:
        code = main(["verify", str(bundle / "out")])
    finally:
        os.umask(old)
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: verify: "), err
    assert "umask is 0777" in err[0] and "free space" not in err[0]


# --------------------------------------------------------------------------- linked config

def test_a_linked_site_config_names_the_input_beside_its_target(tmp_path, capsys):
    """A site config shared by a symbolic link (``site/site.toml -> ../shared/site.toml``)
    reads its relative ``[input] path`` from the link's folder (a relative name is
    resolved by the reader against the path as given, POSIX path resolution (m)); `run`
    said only "input file 'site/tower.csv' does not exist" beside a config whose target
    has ``tower.csv`` next to it. Now the line names the link, its target and the file
    found there, exit 2, nothing written; a linked config whose input is beside the link
    runs as before."""
    shared = make_bundle(tmp_path / "shared")
    (tmp_path / "site").mkdir()
    link = tmp_path / "site" / "site.toml"
    link.symlink_to(Path("..") / "shared" / shared.name)
    out = tmp_path / "site" / "out"
    assert main(["run", str(link), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: [input] path: "), err
    assert "symbolic link" in err[0] and str(tmp_path / "shared" / "tower.csv") in err[0]
    assert not out.exists()
    (tmp_path / "site" / "tower.csv").symlink_to(tmp_path / "shared" / "tower.csv")
    assert main(["run", str(link), "--out", str(out), "--quiet"]) == 0


# --------------------------------------------------------------------------- report

def test_a_result_moved_while_its_report_is_drawn_is_one_line(copy, capsys, monkeypatch):
    """``mv out moved`` while ``report out`` drew its figures: the page read each table's
    units again from the folder's files and ended in a FileNotFoundError traceback (exit
    1); moved later, the report was written into a new ``out/`` holding only
    ``report/``, a page beside no result. A moved folder keeps its inode, a new one at
    the old path has another (POSIX rename(2) (m)): now one error line, exit 2, nothing
    made at the old path, the moved result untouched."""
    from fluxpart import report as report_module

    original = report_module.draw_figures

    def drawn_while_moved(written, tick):
        os.rename(copy / "out", copy / "moved")
        return original(written, tick)

    monkeypatch.setattr(report_module, "draw_figures", drawn_while_moved)
    before = sorted(os.listdir(copy / "out"))
    code = main(["report", str(copy / "out")])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert len(err) == 1 and err[0].startswith("error: ") and "moved" in err[0], err
    assert not (copy / "out").exists()
    assert sorted(os.listdir(copy / "moved")) == before


# --------------------------------------------------------------------------- batch leftovers

def test_a_skipped_site_loses_the_staging_folder_a_killed_batch_left(tmp_path):
    """``kill -9`` of a batch while a worker wrote a site leaves ``.KEY.staging-*`` (a whole
    copy of a result) beside the site folder (measured: 1 of 8 kill points, 9 s into a
    3-site batch). The rerun found the site up to date and skipped it, leaving the copy
    for good, and every verify of the site said a run into it was running or stopped.
    Now a skipped site's leftovers are removed under its lock, taken without waiting: a
    lock held by a writer running now keeps them (flock(2): a lock ends with its
    holder's process, SIGKILL too (m))."""
    import shutil

    from fluxpart import resultdir

    config = make_bundle(tmp_path / "fen", name="fen.toml")
    folder = tmp_path / "net" / "fen"
    assert batch.run_site("fen", config, folder).status == "written"
    staging = folder.parent / ".fen.staging-k9x2m4qa"
    shutil.copytree(folder, staging)
    assert resultdir.interrupted_writes(folder) == [staging.name]

    with resultdir.folder_lock(folder, timeout=0):       # a writer running now
        held = batch.run_site("fen", config, folder)
    assert held.status == "skipped" and staging.is_dir()

    again = batch.run_site("fen", config, folder)
    assert again.status == "skipped" and again.note == "up to date"
    assert not staging.exists() and resultdir.interrupted_writes(folder) == []
    assert batch.is_up_to_date(config, folder)
