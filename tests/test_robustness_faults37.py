"""Faults found by round faults37 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import shutil
import sys

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main
from fluxpart.manifest import shown_path


@pytest.mark.parametrize("name, shown", [
    ("/data/tower out", "/data/tower out"),                # printable: as it is
    ("/data/Québec/out", "/data/Québec/out"),
    ("/data/a\nb", "'/data/a\\nb'"),                        # a line break: quoted, escaped
    ("/data/a\tb\x1b[2J", "'/data/a\\tb\\x1b[2J'"),         # a tab and a terminal escape
    ("/data/caf\udce9", "/data/caf\\xe9"),                  # a byte that is not UTF-8
])
def test_a_path_is_shown_on_one_line(name, shown):
    """Python's ``str.isprintable`` and ``repr`` (standard library (m)): a path holding
    a character that is not printable is shown quoted with escapes, on one line."""
    assert shown_path(name) == shown
    assert "\n" not in shown_path(name) and shown_path(name).isprintable()


def test_diff_shows_a_folder_with_a_line_break_on_one_line(copy, capsys):
    """`verify`, `run`, `report`, `export` and `diff` printed a folder name holding a
    line break as it is: a reader or a log parser saw two lines (faults36 left this
    open). Now quoted."""
    odd = copy.parent / "a\nb"
    shutil.copytree(copy / "out", odd)
    assert main(["diff", str(odd), str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert repr(str(odd)) in out.splitlines()[0] and str(odd) not in out


def test_quiet_help_says_it_silences_progress_only(capsys):
    """`run --quiet` prints the budget tables, as its help ("no progress output") said it
    would; a user read it as "print nothing". The help and the README now say what still
    prints (the behaviour is the documented one, kept)."""
    from pathlib import Path

    with pytest.raises(SystemExit):
        main(["run", "--help"])
    helped = " ".join(capsys.readouterr().out.split())
    assert "no progress display (the tables, warnings" in helped
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text()
    assert "only the progress display" in " ".join(readme.split())


def test_matplotlib_refused_memory_is_the_memory_line_only(monkeypatch, copy, capsys):
    """Under ``ulimit -v`` 300-320 MB `report` said "matplotlib is installed but could
    not be loaded (...failed to map segment from shared object); where a memory limit is
    set ..., else reinstall": two remedies, one of them wrong. The dynamic loader's words
    (glibc dlopen (m)) now reach the command line's one line about memory."""
    import importlib.abc

    class Refusing(importlib.abc.MetaPathFinder):
        def find_spec(self, name, path=None, target=None):
            if name == "matplotlib.figure":
                raise ImportError("libXau.so.6: failed to map segment from shared object")
            return None

    for name in [m for m in sys.modules if m == "matplotlib.figure"]:
        monkeypatch.delitem(sys.modules, name)
    monkeypatch.setattr(sys, "meta_path", [Refusing(), *sys.meta_path])
    assert main(["report", "--quiet", str(copy / "out")]) == 2
    err = [line for line in capsys.readouterr().err.splitlines()
           if not line.startswith("warning:")]
    assert len(err) == 1 and "ran out of memory loading a library" in err[0], err
    assert "reinstall" not in err[0]
    assert not (copy / "out" / "report").exists()


def test_diff_names_a_table_whose_metadata_only_differs():
    """`diff` of a folder written by release 0.30.0 and one written now listed "table
    monthly bytes" and "table timeseries bytes" as differing, read as changed numbers:
    only two columns' descriptions had been reworded. Values are compared with
    ``pandas.DataFrame.equals`` (pandas, NaN equal to NaN (m)), then the metadata."""
    from fluxpart.diff import table_difference

    first = pd.DataFrame({"nee": [1.0, np.nan]}, index=pd.Index([2021, 2022], name="year"))
    first.attrs = {"units": {"nee": "g m-2"}, "descriptions": {"nee": "net exchange"}}
    second = first.copy()
    second.attrs = {"units": {"nee": "g m-2"}, "descriptions": {"nee": "net ecosystem exchange"}}
    assert table_difference(first, second) == \
        "metadata only (values equal): descriptions of nee"
    assert table_difference(first, first.copy()) == "file only (values and metadata equal)"
    moved = first.copy()
    moved.iloc[0, 0] = 1.0 + 1e-3
    assert table_difference(first, moved) == "values"
    # a change within verify's rounding tolerance (1e-6 relative) is named so (leftovers50)
    moved.iloc[0, 0] = 1.0 + 1e-15
    assert table_difference(first, moved).startswith("values within rounding")
    renamed = first.rename(columns={"nee": "nep"})
    assert table_difference(first, renamed) == "values"
