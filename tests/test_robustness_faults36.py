"""Result safety faults found by round faults36 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import csv
import shutil
import subprocess

import pytest

from fluxpart import resultdir
from fluxpart.cli import main
from fluxpart.errors import InputFileError
from fluxpart.overlong_values import refuse_overlong_value


def _one_error_line(capsys) -> str:
    err = [line for line in capsys.readouterr().err.splitlines()
           if not line.startswith("warning:")]
    assert len(err) == 1 and err[0].startswith("error:"), err
    return err[0]


def _chattr(flag: str, *paths) -> bool:
    try:
        return subprocess.run(["chattr", flag, *map(str, paths)],
                              capture_output=True).returncode == 0
    except OSError:
        return False


@pytest.mark.parametrize("flag, attribute", [("+i", "immutable"), ("+a", "append-only")])
def test_an_immutable_or_append_only_result_names_chattr_not_chmod(bundle, tmp_path, flag,
                                                                   attribute):
    """An inode attribute (chattr +i / +a, a backup tool's or an archivist's protection)
    keeps every entry of a folder, root included, whatever its mode (ioctl_iflags(2) (m)).
    The write-protected message asked for ``chmod -R u+w``, which changes nothing there;
    an append-only folder passed access(2) and the run failed after its whole computation
    with "Operation not permitted". Both are now refused before the run, naming the
    attribute and chattr."""
    folder = tmp_path / "out"
    shutil.copytree(bundle / "out", folder)
    assert resultdir.replace_refusal(folder) is None
    if not _chattr(flag, folder):
        pytest.skip("chattr is refused here (not root, or a file system without flags)")
    try:
        reason = resultdir.replace_refusal(folder)
    finally:
        _chattr(flag.replace("+", "-"), folder)
    assert reason is not None and "write-protected" in reason, reason
    assert f"its {attribute} attribute" in reason and "chattr -R -i -a" in reason
    assert "chmod" not in reason
    assert resultdir.replace_refusal(folder) is None


def test_a_library_a_memory_limit_cannot_load_is_one_line(tmp_path, capsys, monkeypatch):
    """Under ``ulimit -v`` 150 to 220 MB, `run` ended with a 15-line traceback and exit 1:
    the dynamic loader could not map pandas' or SciPy's compiled library (ImportError
    "failed to map segment from shared object", glibc's dlopen (m)). Now one line, exit 2;
    another ImportError still raises."""
    from fluxpart import fingerprint

    def refused():
        raise ImportError("libscipy_openblas.so: failed to map segment from shared object")

    monkeypatch.setattr(fingerprint, "load_blas_libraries", refused)
    args = ["run", str(tmp_path / "site.toml"), "--out", str(tmp_path / "out"), "--quiet"]
    assert main(args) == 2
    line = _one_error_line(capsys)
    assert "ran out of memory loading a library" in line and "failed to map segment" in line
    assert not (tmp_path / "out").exists()

    def missing():
        raise ImportError("No module named 'scipy'")

    monkeypatch.setattr(fingerprint, "load_blas_libraries", missing)
    with pytest.raises(ImportError, match="No module named"):
        main(args)


def test_a_silent_import_failure_under_a_memory_limit_is_one_line(tmp_path, capsys,
                                                                   monkeypatch):
    """Under ``ulimit -v`` 300 MB `run` ended with "SystemError: error return without
    exception set" from the import machinery (a compiled module's initialisation that
    could not allocate and said nothing) and exit 1. Now one line, exit 2, where the
    process runs under an address-space limit; the same error without a limit, or
    outside an import, still raises (an interpreter or extension bug)."""
    import importlib

    from fluxpart import cli, fingerprint

    def failing_import():
        importlib.import_module("fluxpart._faults36_absent_module")

    def silent_failure(*args, **kwargs):
        raise SystemError("error return without exception set")

    class Finder:                     # the import machinery's last frame, as seen
        @staticmethod
        def find_spec(name, path=None, target=None):
            if name == "fluxpart._faults36_absent_module":
                return importlib.util.spec_from_loader(name, Loader())
            return None

    class Loader(importlib.abc.Loader):
        def create_module(self, spec):
            return None

        exec_module = staticmethod(silent_failure)

    monkeypatch.setattr("sys.meta_path", [Finder(), *__import__("sys").meta_path])
    monkeypatch.setattr(fingerprint, "load_blas_libraries", failing_import)
    args = ["run", str(tmp_path / "site.toml"), "--out", str(tmp_path / "out"), "--quiet"]
    monkeypatch.setattr(cli, "_address_space_limited", lambda: True)
    assert main(args) == 2
    assert "ran out of memory loading a library" in _one_error_line(capsys)
    monkeypatch.setattr(cli, "_address_space_limited", lambda: False)
    with pytest.raises(SystemError):
        main(args)
    monkeypatch.setattr(cli, "_address_space_limited", lambda: True)
    monkeypatch.setattr(fingerprint, "load_blas_libraries", silent_failure)
    with pytest.raises(SystemError):
        main(args)


def test_openblas_is_not_loaded_without_room_for_its_buffers(monkeypatch):
    """OpenBLAS loaded with no room for its 32 MiB work buffer retries the buffer's mmap
    without end (`run` hung under ulimit -v 160 MB in SciPy's ``gotoblas_init``, the
    folder locked; SIGTERM cannot reach a C loop), or ends the process after 10 retries
    with exit 1 (NumPy's, ulimit -v 100 MB). The room under the limit is asked first and
    its lack is a MemoryError, which the command line says in one line; with room, or
    without a limit, nothing changes."""
    from fluxpart import fingerprint

    monkeypatch.setattr(fingerprint, "_address_headroom", lambda: 40 << 20)
    with pytest.raises(MemoryError, match="64 MiB for NumPy's OpenBLAS work buffers, 40 MiB"):
        fingerprint.reserve_numpy_blas.__wrapped__()
    with pytest.raises(MemoryError, match="to load libscipy_openblas"):
        fingerprint.require_address_space(2 * fingerprint.OPENBLAS_BUFFER,
                                          "to load libscipy_openblas.so")
    monkeypatch.setattr(fingerprint, "_address_headroom", lambda: 1 << 30)
    fingerprint.reserve_numpy_blas.__wrapped__()
    monkeypatch.setattr(fingerprint, "_address_headroom", lambda: None)
    fingerprint.reserve_numpy_blas.__wrapped__()
    monkeypatch.undo()
    import resource

    soft = resource.getrlimit(resource.RLIMIT_AS)[0]
    room = fingerprint._address_headroom()
    assert (room is None) if soft == resource.RLIM_INFINITY else 0 < room < soft


def test_a_value_longer_than_the_csv_field_limit_is_refused_by_its_line(copy, capsys):
    """A line of 100 MB without a newline in the input (a logger's memory dumped into the
    file) ended `run` with ``_csv.Error: field larger than field limit (131072)`` and a
    traceback (Python's csv module: ``csv.field_size_limit``, 131 072 by default (m)).
    Now one line naming the line; a long line of short fields is read as before."""
    limit = csv.field_size_limit()
    text = "a,b\n1,2\n" + "9" * (limit + 1) + "\n3,4\n"
    with pytest.raises(InputFileError, match=r"line 3 holds a value of 131,073 characters"):
        refuse_overlong_value("x.csv", text, ",", "whitespace")
    wide = "a,b\n" + ",".join(["1.5"] * (limit // 3)) + "\n"
    refuse_overlong_value("x.csv", wide, ",", "whitespace")             # read as before
    refuse_overlong_value("x.csv", wide.replace(",", " "), "whitespace", "whitespace")
    lines = (copy / "tower.csv").read_text().splitlines(keepends=True)
    (copy / "tower.csv").write_text("".join(lines[:50]) + "7" * (limit + 5) + "\n"
                                    + "".join(lines[50:]))
    assert main(["run", str(copy / "site.toml"), "--out", str(copy / "new"), "--quiet"]) == 2
    line = _one_error_line(capsys)
    assert "line 51 holds a value of" in line and "tower.csv" in line
    assert not (copy / "new").exists()


def test_the_overlong_value_scan_by_blocks_misses_no_line_longer_than_the_limit():
    """The refusal first looks for a block of half the limit without a line boundary
    (round speed53) instead of splitting every file whole: a line one character over
    Python's CSV field limit (``csv.field_size_limit``, 131 072 (m)) is still found
    wherever it starts against the blocks, ending in LF, CR LF or a line separator, and
    a line of exactly the limit is read as before. The scan's answer is checked against
    ``str.splitlines``' lines (Python documentation (m)) on random texts at small limits."""
    import random

    from fluxpart.overlong_values import _may_hold_longer_line

    limit = csv.field_size_limit()
    half = limit // 2
    for offset in (0, 1, half - 2, half - 1, half, half + 1, limit - 1, limit):
        for end in ("\n", "\r\n", "\u2028"):
            head = "a,b\n" + "1" * offset + "\n"
            text = head + "9" * (limit + 1) + end + "3,4\n"
            with pytest.raises(InputFileError, match=r"line 3 holds a value of 131,073"):
                refuse_overlong_value("x.csv", text, ",", "whitespace")
            refuse_overlong_value("x.csv", head + "9" * limit + end + "3,4\n", ",",
                                  "whitespace")
    rng = random.Random(53)
    for _ in range(3000):
        text = "".join(rng.choice("ab,ab,ab\r\n\u2028") for _ in range(rng.randint(0, 90)))
        small = rng.randint(1, 30)
        if max(map(len, text.splitlines()), default=0) > small:
            assert _may_hold_longer_line(text, small), (text, small)


def test_a_figure_pillow_cannot_quantize_for_memory_is_a_memory_error(monkeypatch):
    """Under ``ulimit -v`` 360 MB `report` ended with "ValueError: quantization error"
    (Pillow's C quantizer, whose tables could not be allocated) and a 38-line traceback,
    exit 1. It is now the MemoryError the command line says in one line; another
    ValueError still raises."""
    pytest.importorskip("PIL")
    from PIL import Image

    from fluxpart.figures import Drawing

    class Canvas:
        @staticmethod
        def get_width_height():
            return 2, 2

        @staticmethod
        def buffer_rgba():
            return bytes(range(16))

    assert Drawing.encode(Canvas()).startswith(b"\x89PNG")

    def failing(message):
        def quantize(self, *args, **kwargs):
            raise ValueError(message)
        return quantize

    monkeypatch.setattr(Image.Image, "quantize", failing("quantization error"))
    with pytest.raises(MemoryError, match="could not quantize"):
        Drawing.encode(Canvas())
    monkeypatch.setattr(Image.Image, "quantize", failing("bad number of colors"))
    with pytest.raises(ValueError, match="bad number"):
        Drawing.encode(Canvas())
