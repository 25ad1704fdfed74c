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
