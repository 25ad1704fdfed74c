"""Result safety faults found by round faults35 (invented data only).

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

# One process runs `fluxpart run` (cli.main) once per signal named on its command line; each
# write meets the signal while its staging folder is full, and a signal that a timer sends
# again and again comes again while the staging folder is being removed. After each run the
# script prints the signal, the exit status, whether the handler was put back and what the
# working folder holds.
_STOPPED_RUNS = (
    "import os, shutil, signal, sys\n"
    "import pandas as pd\n"
    "import fluxpart.cli as cli, fluxpart.resultdir as resultdir\n"
    "real_rmtree = shutil.rmtree\n"
    "def stop_in_swap(signum, again):\n"
    "    def rmtree_again(path, *args, **kwargs):\n"
    "        os.kill(os.getpid(), signum)\n"
    "        real_rmtree(path, *args, **kwargs)\n"
    "    def swap(staging, directory):\n"
    "        if again:\n"
    "            shutil.rmtree = rmtree_again\n"
    "        os.kill(os.getpid(), signum)\n"
    "        raise AssertionError('the signal was not raised as a stop')\n"
    "    return swap\n")
_STOPPED_RUNS_LOOP = (
    "for name in sys.argv[2:]:\n"
    "    shutil.rmtree = real_rmtree\n"
    "    signum = getattr(signal, name.strip('+'))\n"
    "    resultdir._swap_in = stop_in_swap(signum, name.endswith('+'))\n"
    "    code = run_once()\n"
    "    print(name, code, signal.getsignal(signum) is signal.SIG_DFL,\n"
    "          ' '.join(sorted(os.listdir('.'))), file=sys.stderr, flush=True)\n")


@pytest.mark.skipif(not hasattr(signal, "SIGUSR1"), reason="POSIX signals")
def test_scheduler_timer_and_power_signals_unwind_with_one_line_and_no_staging_left(tmp_path):
    """A batch scheduler's warning before its time limit (SIGUSR1 or SIGUSR2: Slurm's
    ``--signal``, Grid Engine's ``-notify``), a timer's SIGALRM (``timeout -s ALRM``) and a
    UPS daemon's SIGPWR have the default action "Term" (signal(7) (m)): each ended `run`,
    `report`, `verify`, `export` and `batch` with no line, a batch leaving its semaphores
    to the system (faults35; faults26 and faults34 left SIGUSR1/SIGUSR2 so). Now each
    unwinds as SIGTERM does: one `error:` line naming the signal, exit 128 + signal, no
    staging folder left; a timer's repeat during the clean-up is ignored (setitimer(2):
    an interval timer fires every interval (m)), and the handlers are put back after."""
    names = ["SIGUSR1", "SIGUSR2", "SIGALRM+"] + (["SIGPWR"] if hasattr(signal, "SIGPWR")
                                                    else [])
    script = (_STOPPED_RUNS + RUN_WRITING_ONE_TABLE.replace("sys.exit(cli.main(",
                                                            "run_once = lambda: (cli.main(")
              + _STOPPED_RUNS_LOOP)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    (tmp_path / "site.toml").write_text("")
    done = subprocess.run([sys.executable, "-c", script, str(tmp_path / "out"), *names],
                          env=env, cwd=tmp_path, capture_output=True, text=True, timeout=120)
    lines = done.stderr.strip().splitlines()
    assert done.returncode == 0, done.stderr
    assert len(lines) == 2 * len(names), lines
    for name, said, seen in zip(names, lines[0::2], lines[1::2], strict=True):
        signum = getattr(signal, name.strip("+"))
        assert said.startswith(f"error: stopped by {name.strip('+')} ("), said
        assert "never a mix" in said
        assert seen == f"{name} {128 + signum} True site.toml", seen


@pytest.mark.parametrize("code, said", [
    ("ESTALE", "handle went stale"), ("EIO", "failed to deliver its bytes"),
    ("ENOTCONN", "not connected"), ("EACCES", "readable by this user")])
def test_a_table_the_system_will_not_read_is_given_the_fix_of_its_fault(tmp_path, code, said):
    """A stale handle of a network share (ESTALE) reading a table in `verify` was told
    "make it and its folder readable by this user", the fix of a refused permission only
    (store.unreadable; the input's reader already gave no permission fix for EIO,
    faults24). Each errno now gets its own remedy (errors.read_fault_remedy; Linux
    errno(3) (m)); a permission keeps its fix."""
    import errno

    from fluxpart import store

    table = tmp_path / "daily.parquet"
    number = getattr(errno, code)
    message = str(store.unreadable(table, OSError(number, os.strerror(number), str(table))))
    assert message.startswith(f"{str(table)!r} cannot be read: {os.strerror(number)}; ")
    assert said in message and "\n" not in message
    assert ("readable by this user" in message) == (code == "EACCES")


def test_a_stopped_batch_removes_what_its_local_workers_left_beside_the_sites(
        tmp_path, monkeypatch):
    """SIGTERM to every process of a batch job (a scheduler's time limit) ended a local
    worker while it wrote a site: its ``.KEY.staging-*`` folder, a whole copy of a result,
    stayed beside the site until a later batch or run of it (faults35; every `verify` of
    the site meanwhile said a run into it "is running now or was stopped"). Once the
    stopped batch has closed its local cluster it removes such folders of its sites,
    under each site's lock, waiting a few seconds for workers still ending
    (batch._tidy_stopped_sites); a site whose lock a writer holds longer keeps its own."""
    from bundles import make_bundle

    from fluxpart import batch, resultdir

    config = make_bundle(tmp_path / "towers", name="fen.toml")
    (tmp_path / "sites.toml").write_text('[batch]\nsites = ["towers/fen.toml"]\n'
                                         'out = "net"\n')
    closed = []

    class Closing:
        def close(self):
            closed.append(self)

    def stopped(client, sites, out, *args):
        [(key, _)] = sites
        staging = resultdir.make_staging(out / key)
        (staging / "annual.parquet").write_bytes(b"a worker's table")
        resultdir.make_staging(out / "busy")       # a writer's, who holds its lock
        held.append(resultdir.folder_lock(out / "busy", timeout=0))
        held[0].__enter__()
        raise KeyboardInterrupt

    held = []
    monkeypatch.setattr(batch, "_client", lambda *args: (Closing(), Closing()))
    monkeypatch.setattr(batch, "_run_tasks", stopped)
    with pytest.raises(KeyboardInterrupt):
        batch.run_batch(tmp_path / "sites.toml")
    out = tmp_path / "net"
    assert len(closed) == 2
    left = sorted(p.name for p in out.iterdir() if "staging" in p.name)
    assert len(left) == 1 and left[0].startswith(".busy.staging-"), left
    # a folder whose writer still holds its lock past the wait is not touched, one whose
    # writer ended is
    monkeypatch.setattr(batch, "_ENDING_WORKER_WAIT", 0.2)
    assert batch._tidy_stopped_sites(out, [("busy", config)]) == []
    held[0].__exit__(None, None, None)
    assert batch._tidy_stopped_sites(out, [("busy", config)]) == [f"removed {left[0]}"]


def test_a_result_moved_while_its_report_is_written_is_named_moved(copy, monkeypatch):
    """A result folder moved (``mv``) while `report` wrote its page into it: the swap of
    the report's staging folder found no folder at the old path, and the line said "the
    report folder ... cannot be written (No such file or directory) ...: give --out a
    writable folder" (faults35), a fault that was not there. The line now says the result
    was moved while its report was drawn, as it did for a move before the write."""
    from fluxpart import report
    from fluxpart.errors import InputFileError

    directory, moved = copy / "out", copy / "out moved"
    real_write = report.atomic_write_bytes

    def write_then_moved(path, data):
        real_write(path, data)
        if path.name == "report.html":
            directory.rename(moved)

    monkeypatch.setattr(report, "draw_figures", lambda written, tick: [])
    monkeypatch.setattr(report, "atomic_write_bytes", write_then_moved)
    with pytest.raises(InputFileError, match="was moved, renamed, removed or replaced while "
                                             "its report was drawn"):
        report.build_report(directory)
    assert not directory.exists() and not (moved / "report").exists()
