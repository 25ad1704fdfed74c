"""Result safety faults found by round faults34 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from bundles import RUN_WRITING_ONE_TABLE

ROOT = Path(__file__).resolve().parent.parent

# A run whose write meets the CPU-time limit's signal while its staging folder is full;
# the signal comes again (as the kernel repeats it every CPU second past the soft limit)
# while the staging folder is being removed.
_CPU_LIMITED_RUN = (
    "import os, shutil, signal, sys\n"
    "import pandas as pd\n"
    "import fluxpart.cli as cli, fluxpart.resultdir as resultdir\n"
    "real_rmtree = shutil.rmtree\n"
    "def rmtree_again(path, *args, **kwargs):\n"
    "    os.kill(os.getpid(), signal.SIGXCPU)\n"
    "    real_rmtree(path, *args, **kwargs)\n"
    "def out_of_cpu(staging, directory):\n"
    "    shutil.rmtree = rmtree_again\n"
    "    os.kill(os.getpid(), signal.SIGXCPU)\n"
    "    raise AssertionError('SIGXCPU was not raised as a stop')\n"
    "resultdir._swap_in = out_of_cpu\n"
    + RUN_WRITING_ONE_TABLE)


@pytest.mark.skipif(not hasattr(signal, "SIGXCPU"), reason="POSIX signal")
def test_a_cpu_time_limit_unwinds_with_one_line_and_no_staging_left(tmp_path):
    """A soft CPU-time limit (`ulimit -St`, a scheduler's CPU limit) sends SIGXCPU, whose
    default action (signal(7): core) ended `run` and `report` outright with no line: `run`
    stopped at 1.2 s CPU left `.OUT.staging-*` beside the folder (cli.main, faults34).
    Now it unwinds as SIGTERM does: exit 152 (128 + SIGXCPU), one `error:` line naming the
    limit, no staging left, also where the signal comes again during the clean-up
    (setrlimit(2), RLIMIT_CPU: repeated every CPU second up to the hard limit (m))."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    out = tmp_path / "out"
    done = subprocess.run([sys.executable, "-c", _CPU_LIMITED_RUN, str(out)], env=env,
                          cwd=tmp_path, capture_output=True, text=True, timeout=120)
    err = done.stderr.strip().splitlines()
    assert done.returncode == 128 + signal.SIGXCPU, done.stderr
    assert len(err) == 1 and err[0].startswith("error: out of CPU time (SIGXCPU"), err
    assert "ulimit -t" in err[0]
    assert not out.exists()
    assert sorted(path.name for path in tmp_path.iterdir()) == []


_READ_UNDER_LIMIT = """
import resource, sys
from fluxpart import store
from fluxpart.errors import ResourceShortage
size = int(open("/proc/self/statm").read().split()[0]) * resource.getpagesize()
resource.setrlimit(resource.RLIMIT_AS, (size + (1 << 30), resource.RLIM_INFINITY))
try:
    store.read_table(sys.argv[1])
except ResourceShortage as error:
    print("shortage:", error)
except Exception as error:
    print(type(error).__name__ + ":", error)
"""


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="/proc and RLIMIT_AS")
def test_a_large_file_in_place_of_a_table_is_named_damaged_without_reading_it(tmp_path):
    """A result table replaced by a large file of something else (here a sparse 2 GB
    file: no disk used) was read whole into memory before pyarrow looked for the footer
    (store.arrow_table since faults33): 3 GB and 15 s for a 3 GB file, and under a memory
    limit "the system refused memory ... the file was not judged" for a file that is no
    Parquet file at all (faults34). Parquet's frame (the mark PAR1 at both ends, the
    footer's length before the last; Apache Parquet "File Format" (m)) is now checked
    first, from 12 bytes."""
    big = tmp_path / "timeseries.parquet"
    with open(big, "wb") as handle:
        handle.truncate(2 << 30)
    env = dict(os.environ, PYTHONPATH=str(ROOT), OMP_NUM_THREADS="1")
    done = subprocess.run([sys.executable, "-c", _READ_UNDER_LIMIT, str(big)], env=env,
                          capture_output=True, text=True, timeout=120)
    assert done.stdout.startswith("InputFileError:"), done.stdout + done.stderr
    assert ("2147483648 bytes without Parquet's mark PAR1 at its start and its end"
            in done.stdout)
    assert "the file is damaged" in done.stdout


def test_a_table_whose_frame_is_broken_is_named_by_what_is_wrong(tmp_path):
    """The frame check names a file too short to be Parquet and a footer length larger
    than the file, and lets a sound table through (its rows known)."""
    import pandas as pd

    from fluxpart import store
    from fluxpart.errors import InputFileError

    path = tmp_path / "known.parquet"
    frame = pd.DataFrame({"nee": [-1.5, 0.25, 2.0]})
    store.write_table(frame, path, units={"nee": ("umol m-2 s-1", "NEE")}, name="known")
    assert store.read_table(path)["nee"].tolist() == [-1.5, 0.25, 2.0]
    data = path.read_bytes()
    short = tmp_path / "short.parquet"
    short.write_bytes(b"PAR1PAR1")
    with pytest.raises(InputFileError, match="8 bytes, fewer than the 12"):
        store.read_table(short)
    cut = tmp_path / "cut.parquet"
    cut.write_bytes(data[:-100])
    with pytest.raises(InputFileError, match=r"PAR1 at its end \(cut short\?\)"):
        store.read_table(cut)
    lying = tmp_path / "lying.parquet"
    lying.write_bytes(data[:-8] + (len(data)).to_bytes(4, "little") + b"PAR1")
    with pytest.raises(InputFileError, match=f"footer is said to take {len(data)} bytes"):
        store.read_table(lying)


def test_report_through_a_link_locks_the_folder_the_link_leads_to(written_demo, tmp_path,
                                                                  monkeypatch):
    """`report` asked whether the folder holding the *link* to a result was writable, but
    its lock file goes beside the folder the link leads to (resultdir.lock_file): a link
    in a read-only folder to a writable result wrote the page without the lock (a run
    replacing the result meanwhile would leave a page of the result before), and a link
    in a writable folder to a result on a read-only mount failed on the lock file with
    "choose a writable output folder" instead of the read-only report folder's line
    naming --out (faults34). Here the link's folder is the read-only one."""
    import argparse

    from fluxpart import report
    from fluxpart.resultdir import lock_file

    _, folder = written_demo
    link_folder = tmp_path / "shared"
    link_folder.mkdir()
    link = link_folder / "result"
    link.symlink_to(folder, target_is_directory=True)
    real_access = os.access

    def access(path, mode, *args, **kwargs):     # the link's folder read-only
        if os.path.abspath(path) == str(link_folder) and mode & os.W_OK:
            return False
        return real_access(path, mode, *args, **kwargs)

    held = []

    def build_report(directory, out=None, progress=None):
        held.append(lock_file(folder).exists())
        return Path(directory) / "report" / "report.html"

    monkeypatch.setattr(report.os, "access", access)
    monkeypatch.setattr(report, "build_report", build_report)
    args = argparse.Namespace(directory=str(link), out=None, quiet=True)
    assert report.command_report(args) == 0
    assert held == [True]
    assert not lock_file(folder).exists()


@pytest.mark.parametrize(("code", "whose"), [("EMFILE", "this process's, ulimit -n"),
                                             ("ENFILE", "the system's")])
def test_too_many_open_files_is_one_line(tmp_path, monkeypatch, capsys, code, whose):
    """Under `ulimit -n 5` `verify` of the grassland example ended in a 33-line traceback
    from the clean-up of its scratch folder (exit 1, which for verify reads "NOT
    reproduced") and `report` in a 56-line one opening matplotlib's font (exit 1). EMFILE
    is the process's limit on open files, ENFILE the system's (errno(3), open(2) (m)):
    now one line naming the limit, exit 2 (faults34)."""
    import errno

    from fluxpart import cli

    def refused(args):
        number = getattr(errno, code)
        raise OSError(number, os.strerror(number),
                      str(tmp_path / "mpl-data" / "fonts" / "ttf" / "DejaVuSans.ttf"))

    monkeypatch.setattr(cli, "_command_report", refused)
    (tmp_path / "result").mkdir()
    status = cli.main(["report", str(tmp_path / "result")])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: too many open files"), err
    assert whose in err[0] and "raise the limit" in err[0]
