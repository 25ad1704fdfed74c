"""Result safety and batch faults found by round faults32 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent

_THREADS_OF_A_NETWORK_READ = """
import os, sys
import pyarrow as pa, pyarrow.parquet as pq
from fluxpart import batch
def threads():  # pyarrow's and Python's; not jemalloc's background purger
    names = [open(f"/proc/self/task/{t}/comm").read().strip()
             for t in os.listdir("/proc/self/task")]
    return sum(name != "jemalloc_bg_thd" for name in names)
out = sys.argv[1]
for key, years, nee in (("fen", [2020, 2021], [-101.5, -87.25]), ("heath", [2021], [12.0])):
    os.makedirs(f"{out}/network_annual/site={key}")
    pq.write_table(pa.table({"year": years, "nee": nee}),
                   f"{out}/network_annual/site={key}/part-0.parquet")
before = threads()
frame = batch.read_network(out)
print(threads() - before)
print(frame.to_json(orient="split"))
"""


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="Linux /proc needed")
def test_a_network_table_is_read_on_the_calling_thread(tmp_path):
    """``read_network`` (and so the end of every ``batch``) read the site files with
    pyarrow's dataset scanner, which starts pyarrow's I/O pool (here 7 threads, also with
    ``use_threads=False``; pyarrow's reading of a path, an open file or a memory map one
    thread per file, up to 8). Under ``ulimit -v`` a thread the system refuses hung the read
    for good (325-475 MB) or ended the process before Python could say why (glibc's
    "cannot allocate memory for thread-local data: ABORT", exit 127, up to 700 MB): of 15
    limits from 300 to 700 MB none read the example network's tables. The files are now
    read by Python and decoded from memory on the calling thread, which starts no thread;
    one that is never started cannot be refused (pthread_create(3), EAGAIN (m)). Known truth (invented fen and heath sites): the rows
    written, the site key from each file's folder, sorted by site and year."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, "-c", _THREADS_OF_A_NETWORK_READ,
                           str(tmp_path / "out")],
                          capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    started, frame = done.stdout.splitlines()
    assert int(started) == 0
    assert frame == ('{"columns":["site","year","nee"],"index":[0,1,2],'
                     '"data":[["fen",2020,-101.5],["fen",2021,-87.25],["heath",2021,12.0]]}')


_FORK_SERVER_SIGINT = """
import signal, sys
from fluxpart import batch

def ignored_by(pid):
    with open(f"/proc/{pid}/status") as status:
        return int(next(l for l in status if l.startswith("SigIgn:")).split()[1], 16)

def worker(path):
    batch.dask_setup(None)            # the Dask preload of every worker
    with open(path, "w") as out:
        out.write(str(ignored_by("self")))

if __name__ == "__main__":
    from multiprocessing import forkserver, resource_tracker

    import dask
    from distributed.utils import get_mp_context
    # as batch._client starts a local cluster on Linux
    with dask.config.set({"distributed.worker.multiprocessing-method": "forkserver"}):
        batch._use_fork_server()
        context = get_mp_context()
    assert context.get_start_method() == "forkserver"
    forkserver.ensure_running()       # what the first worker's start calls; returns at once
    server = ignored_by(forkserver._forkserver._forkserver_pid)  # at once: still importing
    tracker = ignored_by(resource_tracker._resource_tracker._pid)
    child = context.Process(target=worker, args=(sys.argv[1],))
    child.start()
    child.join()
    with open(sys.argv[1]) as done:
        forked = int(done.read())
    for name in ("SIGINT", "SIGHUP", "SIGUSR1", "SIGUSR2"):
        bit = 1 << (getattr(signal, name) - 1)
        print(name, bool(server & bit), bool(tracker & bit), bool(forked & bit))
    print("client", signal.getsignal(signal.SIGINT) is signal.default_int_handler,
          signal.getsignal(signal.SIGHUP) is signal.SIG_DFL)
"""


@pytest.mark.skipif(not Path("/proc/self/status").exists(), reason="Linux /proc needed")
def test_the_fork_server_ignores_ctrl_c_from_its_start(tmp_path):
    """A terminal's Ctrl-C goes to the whole foreground process group (POSIX, General
    Terminal Interface (m)). The fork server of a local cluster ignored SIGINT only after
    importing its preload modules (about a second), so Ctrl-C in the first 2-4 s of a
    batch printed its KeyboardInterrupt traceback, with Dask's exit-time assertion on
    the half-started cluster: 36-49 lines of stderr after the one ``error:`` line. It is
    now started with SIGINT ignored, which an executed program keeps (POSIX exec (m)):
    the server's ``SigIgn`` mask (proc(5)) holds SIGINT as soon as it runs (before: not
    until its imports were done).

    Round faults35: the same for the other signals sent to the whole group, which the
    batch process alone answers (``batch._group_stops``): a closed SSH session's SIGHUP
    and a scheduler's SIGUSR1 or SIGUSR2 to every process of the job killed the fork
    server, Python's resource tracker and the workers, 51 lines of stderr before the
    batch's one line. The server, the tracker and a forked worker after its Dask preload
    ignore them; the batch process's own handlers are put back."""
    script = tmp_path / "server.py"
    script.write_text(_FORK_SERVER_SIGINT, encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, str(script), str(tmp_path / "mask")],
                          capture_output=True, text=True, env=env, timeout=180, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert done.stdout.splitlines() == [f"{name} True True True" for name in
                                        ("SIGINT", "SIGHUP", "SIGUSR1", "SIGUSR2")] + [
        "client True True"]
