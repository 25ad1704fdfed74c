"""Result safety faults found by round faults31 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from fluxpart.errors import OutputError
from fluxpart.resultdir import write_folder

ROOT = Path(__file__).resolve().parent.parent

_THREADS_OF_A_READ = """
import os, sys
import numpy as np, pandas as pd, pyarrow as pa
from fluxpart import store
pa.set_cpu_count(4)
def threads():
    return len(os.listdir("/proc/self/task"))
frame = pd.DataFrame({f"c{i}": np.arange(20000.0) + i for i in range(40)})
store.write_table(frame, sys.argv[1], units={f"c{i}": ("1", "a count") for i in range(40)},
                  name="known")
before = threads()
back = store.read_table(sys.argv[1])
pd.testing.assert_frame_equal(back, frame, check_dtype=True)
print(threads() - before, flush=True)
"""


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="Linux /proc needed")
def test_a_table_is_decoded_on_the_calling_thread(tmp_path):
    """A refused allocation (``std::bad_alloc``) inside one of pyarrow's worker threads
    leaves the thread's start function, which calls ``std::terminate`` (C++ standard,
    [except.terminate] (m)): under ``ulimit -v`` 400, 475 and 525 MB `verify` of the
    grassland example's result ended with "terminate called after throwing an instance
    of 'std::bad_alloc'" (exit 134, no ``error:`` line). On the calling thread pyarrow
    raises it as MemoryError, which `verify` names in one line. Before the fix reading
    this 40-column table started the pool's 4 decoding threads and pyarrow's I/O thread
    (5); now at most the I/O thread. Known truth: the frame read back is the one written
    (invented data)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, "-c", _THREADS_OF_A_READ,
                           str(tmp_path / "known.parquet")],
                          capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    assert int(done.stdout.strip()) <= 1


def test_a_site_folder_replaced_by_a_file_names_the_file_as_the_fix(tmp_path):
    """A batch writes each site to ``--out/<site>``; where that name is a file (a note
    saved under the site's name, a copy gone wrong) the line said only "choose another
    --out", which moves every site of the network. It now names the file as the thing
    to move or delete, and the file is left as it was (common practice: an error names
    the fix that removes its cause)."""
    target = tmp_path / "network-output" / "north_meadow"
    target.parent.mkdir()
    target.write_text("keep me", encoding="utf-8")
    with pytest.raises(OutputError) as raised:
        write_folder(target, {}, site={"name": "North meadow (fictional)"}, config={},
                     seed=1, provenance={})
    message = str(raised.value)
    assert "is not a folder (an existing file)" in message
    assert "move or delete that file" in message
    assert "\n" not in message
    assert target.read_text(encoding="utf-8") == "keep me"
