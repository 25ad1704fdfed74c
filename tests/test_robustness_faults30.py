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
a = np.ones((300, 300)); out = np.empty_like(a)
with open("/proc/self/status") as status:
    size = next(int(line.split()[1]) for line in status if line.startswith("VmSize:")) * 1024
resource.setrlimit(resource.RLIMIT_AS, (size + (4 << 20), size + (4 << 20)))
np.matmul(a, a, out=out)
print("numpy", out[0, 0], flush=True)
"""


@pytest.mark.skipif(not Path("/proc/self/status").exists(), reason="Linux /proc needed")
def test_blas_buffers_are_taken_at_the_start_not_when_memory_is_short():
    """OpenBLAS maps a work buffer at the first matrix product that needs one; where the
    address space of a memory limit (``setrlimit(RLIMIT_AS)``, ``ulimit -v``) leaves no
    room it prints "Memory allocation still failed after 10 retries, giving up" and calls
    ``exit(1)`` (OpenBLAS ``driver/others/memory.c``, ``blas_memory_alloc`` (m); measured: `run` and `verify` ended so at 7 of 12 limits from 425 to 700
    MB, in NumPy's OpenBLAS). After :func:`fingerprint.load_blas_libraries` a product of
    NumPy's OpenBLAS must still run with 4 MB of address space left. Known truth: the
    product of two 300 x 300 matrices of ones holds 300 (matrix product, by hand)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-c", _LIMITED_PRODUCT], capture_output=True,
                          text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stdout + done.stderr
    assert done.stdout.split() == ["numpy", "300.0"]


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


def test_a_flipped_byte_in_a_tables_footer_is_named_damaged_on_one_line(copy, capsys):
    """A byte changed in a Parquet footer (a bad disk sector, a faulty copy): pyarrow
    raises a plain OSError without an errno ("Couldn't deserialize thrift: ...", ending in
    a line break). `verify` named the file with the fix of a permission fault ("make it
    and its folder readable by this user") split over two lines. Now "is not a readable
    Parquet file ... damaged" on one line. Parquet format: the file ends in the footer's
    length (4 bytes) and the magic "PAR1" (Apache Parquet format specification (m)), so
    the 20th byte from the end lies in the Thrift-encoded footer."""
    from fluxpart.cli import main
    from fluxpart.errors import InputFileError
    from fluxpart.store import read_table

    path = copy / "out" / "monthly.parquet"
    data = bytearray(path.read_bytes())
    assert data[-4:] == b"PAR1"
    data[-20] ^= 0xFF
    path.write_bytes(bytes(data))
    with pytest.raises(InputFileError, match="damaged") as caught:
        read_table(path)
    assert "\n" not in str(caught.value) and "readable by this user" not in str(caught.value)
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    line = next(line for line in out.splitlines() if "monthly.parquet is unreadable" in line)
    assert line.rstrip().endswith("rerun to rewrite the folder")


def test_a_clock_column_is_still_found_where_its_second_label_comes_late():
    """Known-truth recovery on invented data: a ``zone`` column holding ``CET`` for its
    first 100 records and ``CEST`` after (IANA abbreviations: UTC+1 and UTC+2 (m)) states
    civil time; the early look at the first cells must not rule it out."""
    import pandas as pd

    from fluxpart.stamp_places import zone_column_message

    zone = pd.Series(["CET"] * 100 + ["CEST"] * 100, dtype="string")
    said = zone_column_message({"zone": zone}, "%Y%m%d%H%M", None, 1.0, "tower.csv")
    assert said is not None and "'CEST' and 'CET'" in said and "time_zone" in said


def test_wide_files_are_not_sorted_column_by_column_for_a_clock_label():
    """A logger file of many measurement columns (a 310 MB file of 85 columns besides the
    mapped ones, 350640 records: 98 s of its 125 s read went to turning each column into
    Python strings and sorting them whole, to find a column of one or two clock labels).
    Twenty columns of 200000 different numbers must be judged in well under the time the
    whole sort takes (about 1 s per column here); the answer (no clock column) as before,
    compared with the set of labels Python's ``set`` finds (a general-purpose library)."""
    import time

    import numpy as np
    import pandas as pd

    from fluxpart.stamp_places import zone_column_message

    rng = np.random.default_rng(30)
    columns = {f"aux_{i}": pd.Series(np.round(rng.normal(size=200_000), 6).astype(str),
                                     dtype="string") for i in range(20)}
    assert all(len(set(cells.to_numpy())) > 2 for cells in columns.values())   # plain str cells
    started = time.perf_counter()
    said = zone_column_message(columns, "%Y%m%d%H%M", None, 1.0, "tower.csv")
    assert said is None
    assert time.perf_counter() - started < 4.0


def test_a_result_folder_named_in_another_unicode_form_is_named(copy, capsys):
    """A result folder copied through a Mac keeps an accented name decomposed (NFD; HFS+
    stores names so (m); Unicode Standard Annex #15, NFC and NFD (m)); the auditor types
    it composed (NFC). `verify`, `report`, `export` and `diff` said only "does not exist:
    give the folder that fluxpart run or batch wrote" beside a folder that looks the same
    in every listing. Now the line names the folder's entry in the other form and the
    fix; checked with Python's ``unicodedata`` (a general-purpose library)."""
    import unicodedata

    from fluxpart.cli import main

    composed = unicodedata.normalize("NFC", "Ergebnis Grünland")
    decomposed = unicodedata.normalize("NFD", composed)
    assert composed != decomposed
    (copy / "out").rename(copy / decomposed)
    for command in (["verify", str(copy / composed)], ["report", str(copy / composed)],
                    ["diff", str(copy / composed), str(copy / decomposed)]):
        assert main(command) == 2
        err = capsys.readouterr().err.strip()
        assert err.count("\n") == 0 and "another Unicode form (NFD" in err, command
        assert repr(decomposed) in err
    assert main(["verify", str(copy / decomposed)]) == 0


def test_a_network_file_in_a_folder_named_with_brackets_finds_its_sites(tmp_path):
    """Known-truth recovery on invented data: a network file in a project folder named
    ``towers [2021]`` with two site configs below it (``*/*.toml``). The folder was joined
    to the pattern unescaped, so glob read ``[2021]`` as one character of 2, 0 or 1
    (POSIX glob(7): brackets are pattern characters (m)) and the batch refused to start:
    "matches no .toml file". Python's ``glob.escape`` (a general-purpose library) makes
    the folder literal; both sites are found, the pattern's own ``*`` still a pattern."""
    from bundles import make_bundle

    from fluxpart.batch import read_sites_file

    project = tmp_path / "towers [2021]"
    make_bundle(project / "north", name="north.toml")
    make_bundle(project / "south", name="south.toml")
    (project / "network.toml").write_text('[batch]\nsites = ["*/*.toml"]\nout = "o"\n')
    network = read_sites_file(project / "network.toml")
    assert [key for key, _ in network.sites] == ["north", "south"]
    assert [config.parent.name for _, config in network.sites] == ["north", "south"]


def test_matplotlib_that_will_not_load_is_not_called_not_installed(monkeypatch):
    """Under ``ulimit -v`` 300 MB `report` said "the report needs matplotlib, which is not
    installed; pip install" with matplotlib installed: its compiled module's mapping
    failed ("failed to map segment from shared object"). ``importlib.util.find_spec``
    (Python's standard library) tells installed from not; an installed matplotlib whose
    part does not load is named so. (The loader's words for a memory limit reach the
    command line's one line about memory instead: test_robustness_faults37.)"""
    import importlib.util

    from fluxpart.errors import FluxpartError
    from fluxpart.figures import _import_matplotlib

    assert importlib.util.find_spec("matplotlib") is not None
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)   # its import now fails
    with pytest.raises(FluxpartError, match="installed but could not be loaded") as caught:
        _import_matplotlib()
    assert "reinstall" in str(caught.value) and "which is not installed" not in str(
        caught.value)


def test_the_reading_commands_take_numpys_blas_buffers_first(bundle, monkeypatch):
    """`report`, `export` and `diff` read results with NumPy only; their BLAS products
    (matplotlib's, pandas') ended `report` under ``ulimit -v`` 450 MB with OpenBLAS's
    "Memory allocation still failed after 10 retries, giving up" (exit 1; OpenBLAS's
    ``blas_memory_alloc`` in ``driver/others/memory.c`` ends the process so (m)). Each now
    has NumPy's OpenBLAS take its buffers before it reads (see the limited-product test
    above for what that buys); SciPy's is not loaded for them."""
    from fluxpart import cli, fingerprint

    taken = []
    monkeypatch.setattr(fingerprint, "reserve_numpy_blas", lambda: taken.append("numpy"))
    monkeypatch.setattr(fingerprint, "load_blas_libraries", lambda: taken.append("both"))
    out = bundle / "out"
    cli.main(["diff", str(out), str(out)])
    cli.main(["export", str(out), "--csv", str(bundle.parent / "faults30-csv")])
    assert taken == ["numpy", "numpy"]
