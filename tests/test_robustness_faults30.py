"""Result safety and batch faults found by round faults30 (invented Quillmoor towers only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parent.parent

_LIMITED_PRODUCT = """
import resource, sys
import numpy as np
from fluxpart import fingerprint
fingerprint.load_blas_libraries()
from scipy.linalg import blas
a = np.ones((300, 300)); out = np.empty_like(a); f = np.asfortranarray(a)
with open("/proc/self/status") as status:
    size = next(int(line.split()[1]) for line in status if line.startswith("VmSize:")) * 1024
resource.setrlimit(resource.RLIMIT_AS, (size + (4 << 20), size + (4 << 20)))
np.matmul(a, a, out=out)
print("numpy", out[0, 0], flush=True)
print("scipy", blas.dgemm(1.0, f, f)[0, 0], flush=True)
"""


@pytest.mark.skipif(not Path("/proc/self/status").exists(), reason="Linux /proc needed")
def test_blas_buffers_are_taken_at_the_start_not_when_memory_is_short():
    """OpenBLAS maps a work buffer at the first matrix product that needs one; where the
    address space of a memory limit (``setrlimit(RLIMIT_AS)``, ``ulimit -v``) leaves no
    room it prints "Memory allocation still failed after 10 retries, giving up" and calls
    ``exit(1)`` (measured: `run` and `verify` ended so at 7 of 12 limits from 425 to 700
    MB). After :func:`fingerprint.load_blas_libraries` a product of NumPy's and of
    SciPy's OpenBLAS must still run with 4 MB of address space left. Known truth: the
    product of two 300 x 300 matrices of ones holds 300 (matrix product, by hand)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-c", _LIMITED_PRODUCT], capture_output=True,
                          text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stdout + done.stderr
    assert done.stdout.split() == ["numpy", "300.0", "scipy", "300.0"]


@pytest.mark.parametrize("raised", [
    pa.ArrowMemoryError("malloc of size 130624 failed"),
    pa.ArrowException("Unknown error: Failed to launch worker thread: Resource "
                      "temporarily unavailable")])
def test_a_table_read_refused_memory_is_not_called_damaged(copy, monkeypatch, capsys,
                                                           raised):
    """pyarrow reports a refused allocation as ArrowMemoryError and a thread the system
    would not start as "Failed to launch worker thread: Resource temporarily unavailable"
    (EAGAIN of pthread_create(3) (m)). Under ``ulimit -v`` 400 MB `verify` of a sound
    result said NOT reproduced, 15 tables "damaged: rerun to rewrite the folder", exit 1.
    Now one line naming the table and the limit, exit 2 (not judged)."""
    import pyarrow.parquet as pq

    from fluxpart.cli import main
    from fluxpart.errors import ResourceShortage
    from fluxpart.store import read_table

    def refused(self, *args, **kwargs):
        raise raised

    monkeypatch.setattr(pq.ParquetFile, "read", refused)
    with pytest.raises(ResourceShortage, match="annual.parquet"):
        read_table(copy / "out" / "annual.parquet")
    assert main(["verify", str(copy / "out")]) == 2
    captured = capsys.readouterr()
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: the system refused")
    assert "ulimit -v" in lines[0] and "damaged" not in captured.out + captured.err
    assert "NOT reproduced" not in captured.out
