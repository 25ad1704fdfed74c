"""One Parquet reader on the calling thread, found by round faults33 (invented data only).

The first test fails on the code before the fix it names.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

from fluxpart import store
from fluxpart.errors import InputFileError, ResourceShortage
from fluxpart.verify_folder import _rewritten_elsewhere

ROOT = Path(__file__).resolve().parent.parent

_THREADS_OF_EVERY_READER = """
import os, sys
from pathlib import Path
import numpy as np, pandas as pd, pyarrow as pa, pyarrow.parquet as pq
from fluxpart import batch, store, verify_folder
def threads():  # pyarrow's and Python's; not jemalloc's background purger
    names = [open(f"/proc/self/task/{t}/comm").read().strip()
             for t in os.listdir("/proc/self/task")]
    return sum(name != "jemalloc_bg_thd" for name in names)
out = Path(sys.argv[1])
frame = pd.DataFrame({f"c{i}": np.arange(2000.0) + i for i in range(12)})
store.write_table(frame, out / "known.parquet",
                  units={f"c{i}": ("1", "a count") for i in range(12)}, name="known")
frame.to_parquet(out / "by_pandas.parquet")
os.makedirs(out / "net/network_annual/site=fen")
pq.write_table(pa.table({"year": [2021], "nee": [-90.5]}),
               out / "net/network_annual/site=fen/part-0.parquet")
before = threads()
counts = []
back = store.read_table(out / "known.parquet")
counts.append(threads() - before)
plain = verify_folder._rewritten_elsewhere(out / "by_pandas.parquet")
counts.append(threads() - before)
network = batch.read_network(out / "net")
counts.append(threads() - before)
pd.testing.assert_frame_equal(back, frame, check_exact=True)
pd.testing.assert_frame_equal(plain, frame, check_exact=True)
assert network["nee"].tolist() == [-90.5] and network["site"].tolist() == ["fen"]
print(*counts)
"""


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="Linux /proc needed")
def test_every_parquet_reader_decodes_on_the_calling_thread(tmp_path):
    """``store.read_table`` (every ``verify``, ``report``, ``export``, ``diff`` and
    ``fluxpart.load``) opened the file by its path, and ``verify`` read a table another
    program rewrote with ``pandas.read_parquet``: pyarrow's reading of a path, an open
    file or a memory map starts a thread of its I/O pool, pandas' reader its decoding
    threads too (1 and 2 here before the fix; faults32 measured the same of the network
    reads). Under ``ulimit -v`` a thread the system refuses hangs the read or ends the
    process before Python can say why (glibc's "cannot allocate memory for thread-local
    data: ABORT"). All three now read the bytes in Python and decode from memory on the
    calling thread (``store.arrow_table``); a thread never started cannot be refused
    (pthread_create(3), EAGAIN (m)). Known truth (invented counts): the frames written."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, "-c", _THREADS_OF_EVERY_READER, str(tmp_path)],
                          capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["0", "0", "0"]


def test_a_table_rewritten_elsewhere_reads_as_pandas_reads_it(tmp_path):
    """The frame ``verify`` compares of a table rewritten by another program is the one
    ``pandas.read_parquet`` gives (pandas, the general-purpose reader of such a file:
    its values, dtypes, index from pandas' own metadata and ``attrs`` from the file's
    ``PANDAS_ATTRS`` key, pandas 2.1.0 release notes (m)). Invented daily values."""
    days = pd.date_range("2021-03-01", periods=40, freq="D", name="date")
    frame = pd.DataFrame({"nee": np.linspace(-3.0, 1.5, 40),
                          "quality": pd.Categorical(["measured", "filled"] * 20),
                          "count": np.arange(40, dtype="int32")}, index=days)
    frame.attrs = {"units": {"nee": "g m-2 d-1"}, "site": "Fenwick Moss (fictional)"}
    path = tmp_path / "daily.parquet"
    frame.to_parquet(path)
    ours, theirs = _rewritten_elsewhere(path), pd.read_parquet(path)
    pd.testing.assert_frame_equal(ours, theirs, check_exact=True)
    assert ours.attrs == theirs.attrs == frame.attrs
    # a fluxpart table is not "rewritten elsewhere": it is read (or named damaged) as such
    store.write_table(frame.reset_index(), tmp_path / "ours.parquet",
                      units={"date": ("", "day"), "nee": ("g m-2 d-1", "net exchange"),
                             "quality": ("", "fill"), "count": ("1", "records")},
                      name="daily")
    assert _rewritten_elsewhere(tmp_path / "ours.parquet") is None


def test_damage_and_shortage_are_named_as_before(tmp_path, monkeypatch):
    """The one reader keeps the store's messages: a table cut short is named damaged
    with the fix (one line), one whose decoding the system refused memory for is a
    ``ResourceShortage`` naming the file and "not judged" (pyarrow's
    ``ArrowMemoryError`` text "malloc of size N failed" (m)). Invented counts."""
    frame = pd.DataFrame({"c": np.arange(500.0)})
    path = tmp_path / "known.parquet"
    store.write_table(frame, path, units={"c": ("1", "a count")}, name="known")
    data = path.read_bytes()
    cut = tmp_path / "cut.parquet"
    cut.write_bytes(data[: len(data) // 2])
    with pytest.raises(InputFileError) as caught:
        store.read_table(cut)
    text = str(caught.value)
    assert "cut.parquet" in text and "damaged" in text and "\n" not in text

    class Refusing:
        def __init__(self, source):
            raise pa.ArrowMemoryError("malloc of size 4096 failed")

    monkeypatch.setattr(store.pq, "ParquetFile", Refusing)
    with pytest.raises(ResourceShortage) as caught:
        store.read_table(path)
    assert "'known.parquet'" in str(caught.value) and "not judged" in str(caught.value)


def test_a_python_memory_error_names_no_empty_detail(tmp_path):
    """Python's own :class:`MemoryError` (the file's bytes not held) has no text: the
    line said "... in '<folder>' (): ..."; now the parenthesis is left out."""
    error = store.shortage(tmp_path / "daily.parquet", MemoryError())
    assert isinstance(error, ResourceShortage)
    assert "()" not in str(error) and "'daily.parquet'" in str(error)
    assert "(malloc of size 8 failed)" in str(store.shortage(
        tmp_path / "daily.parquet", pa.ArrowMemoryError("malloc of size 8 failed")))


def test_arrow_table_reads_the_chosen_columns_and_metadata(tmp_path):
    """``arrow_table`` gives the file's key-value metadata (fluxpart's JSON, as
    ``pyarrow.parquet.read_schema`` reads it: pyarrow as the reference) and only the
    columns asked for. Invented counts."""
    import pyarrow.parquet as pq

    frame = pd.DataFrame({"a": np.arange(10.0), "b": np.arange(10.0) * 2, "c": ["x"] * 10})
    path = tmp_path / "t.parquet"
    store.write_table(frame, path, units={k: ("1", k) for k in "abc"}, name="t")
    table = store.arrow_table(path, columns=["a", "c"])
    assert table.column_names == ["a", "c"]
    assert table.schema.metadata == pq.read_schema(path).metadata
    assert json.loads(table.schema.metadata[b"fluxpart"])["table"] == "t"
    assert table["a"].to_pylist() == list(np.arange(10.0))


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
def test_a_pipe_or_folder_in_place_of_a_table_is_named_without_opening_it(tmp_path):
    """Opening a named pipe for reading blocks until a writer opens it (fifo(7) (m)):
    ``read_table`` of a pipe in place of a table waited for good (before and after the
    one reader; killed by ``timeout`` after 20 s). A folder in its place was named
    damaged through pyarrow's text, with the bytes read by Python "cannot be read ...
    make it readable" (a wrong fix). Both are now named as what they are, in one line."""
    os.mkfifo(tmp_path / "daily.parquet")
    (tmp_path / "annual.parquet").mkdir()
    for name, kind in (("daily.parquet", "a named pipe"), ("annual.parquet", "a folder")):
        with pytest.raises(InputFileError) as caught:
            store.read_table(tmp_path / name)
        assert f"{name}' is {kind}, not a Parquet file" in str(caught.value)


def test_a_netcdf_library_not_loaded_is_not_called_missing(monkeypatch):
    """Under ``ulimit -v`` 450 and 550 MB `export --netcdf` of the grassland example said
    "writing NetCDF needs netCDF4, or h5netcdf together with h5py ... install the netcdf
    extra" though h5py was installed: the dynamic loader could not map its HDF5 library
    ("failed to map segment from shared object", glibc's ``dlopen`` text where ``mmap``
    is refused (m)). Python raises :class:`ModuleNotFoundError` for an absent module and
    a plain :class:`ImportError` for one found and not loaded (Python documentation, "The
    import system" (m)); only the first means "install"."""
    import builtins

    from fluxpart import export
    from fluxpart.errors import FluxpartError

    real = builtins.__import__

    def loader(name, *args, **kwargs):
        if name == "netCDF4":
            raise ModuleNotFoundError(f"No module named {name!r}")
        if name == "h5py":
            raise ImportError("libhdf5-0a1b.so.320.0.0: failed to map segment from shared "
                              "object")
        return real(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", loader)
    with pytest.raises(FluxpartError) as caught:
        export._engine()
    text = str(caught.value)
    assert "h5py is installed but could not be loaded" in text
    assert "failed to map segment" in text and "ulimit -v" in text
    assert "pip install" not in text

    def absent(name, *args, **kwargs):
        if name in ("netCDF4", "h5netcdf", "h5py"):
            raise ModuleNotFoundError(f"No module named {name!r}")
        return real(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", absent)
    with pytest.raises(FluxpartError, match="pip install"):
        export._engine()


def test_a_system_call_refused_memory_is_one_line(tmp_path, monkeypatch, capsys):
    """Under ``ulimit -v`` 600 MB `export` of the grassland example ended in a 35-line
    traceback (exit 1): importlib listing a package folder for xarray's lazy import got
    ``OSError: [Errno 12] Cannot allocate memory``. ENOMEM is the system refusing memory
    (errno(3), ENOMEM "Not enough space / cannot allocate memory" (m)): now the memory
    line of the CLI, exit 2."""
    import errno

    from fluxpart import cli

    def refused(args):
        raise OSError(errno.ENOMEM, os.strerror(errno.ENOMEM),
                      str(tmp_path / "site-packages" / "dask" / "array" / "lib"))

    monkeypatch.setattr(cli, "_command_export", refused)
    (tmp_path / "result").mkdir()
    code = cli.main(["export", "--csv", str(tmp_path / "csv"), str(tmp_path / "result")])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert len(err) == 1 and err[0].startswith("error: ran out of memory")
    assert "ulimit -v" in err[0]


@pytest.mark.skipif(not hasattr(os, "symlink"), reason="symbolic links are POSIX")
def test_a_table_that_is_no_file_is_not_told_to_be_made_readable(tmp_path):
    """Round review42: open(2) fails with ENOENT for a symbolic link to nothing and
    ELOOP for a link leading back to itself (open(2), symlink(7), Linux man-pages (m));
    ``arrow_table`` named both "cannot be read ... make it and its folder readable by
    this user", a fix that cannot help. A link to a table reads the table. Invented
    counts."""
    frame = pd.DataFrame({"a": np.arange(4.0)})
    store.write_table(frame, tmp_path / "real.parquet", units={"a": ("1", "a")}, name="t")
    os.symlink("real.parquet", tmp_path / "link.parquet")
    assert store.arrow_table(tmp_path / "link.parquet")["a"].to_pylist() == [0, 1, 2, 3]
    os.symlink("nowhere.parquet", tmp_path / "dangling.parquet")
    os.symlink("loop.parquet", tmp_path / "loop.parquet")
    for name, what in (("dangling.parquet", "is a symbolic link to nothing"),
                       ("loop.parquet", "leads through a symbolic link back to itself"),
                       ("never.parquet", "does not exist")):
        with pytest.raises(InputFileError) as caught:
            store.arrow_table(tmp_path / name)
        assert f"{name}' {what}: rerun" in str(caught.value)
        assert "readable" not in str(caught.value)
