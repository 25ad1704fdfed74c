"""Probe: result-safety faults as an operator, an auditor and a batch user meet them.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_faults.py``
(``--dir DIR`` for the scratch folder, default a new temporary one; names of fault
functions, e.g. ``f_signals f_injected``, to run only those). Round faults35.

Each fault runs the command line (``python -m fluxpart`` of this tree, in a fresh
process) on a 30-day bundle cut from the invented Quillmoor example
(:func:`bundles.make_bundle`) and prints one line: ``held`` or ``FAILED`` and what was
seen. A fault holds where the command leaves no half-written result and either names
the cause in one ``error:`` line (exit 2, or 128 + the signal for a stop) or completes
correctly, and ``verify`` then passes a genuine result and fails an altered one,
naming what changed. The last line counts the faults held. Timed faults (signals at an
offset, a folder moved while a report is written) depend on the machine's load: a
signal that comes before the command writes tests less than it says; rerun to sample.

Faults: a scheduler's, a timer's and a UPS daemon's signals during run, report, verify
and export; a table replaced by another run's or by another table; another run's
manifest; another run's result under this run's run log; a path with spaces, unicode
and glob characters; a result reached through a link; kill -9 of verify and report; a
killed run's staging dated in the future (a clock set back); TZ, locale, hash seed and
thread counts (tables byte-identical); two runs at once into two folders; injected
errors (disk quota, stale NFS handle, a name a FAT file system refuses, I/O error);
the result moved while report writes; verify of a result of another CPU and Python
patch; the input rewritten while read; a Dask batch stopped by SIGTERM or SIGUSR1 with
sites finished, the same signals and SIGHUP to every process of the job, a worker
killed as by the OOM killer, a batch into an odd folder name.
"""
import hashlib
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

TREE = Path(__file__).resolve().parents[2]
PY = sys.executable
W = Path(sys.argv[sys.argv.index("--dir") + 1] if "--dir" in sys.argv
         else tempfile.mkdtemp(prefix="fluxpart-faults-"))
ENV = dict(os.environ, PYTHONPATH=str(TREE), OMP_NUM_THREADS="1")
results = []

#: A forger's tool: recompute every table's SHA-256 and the manifest's seal after the
#: statement in argv[2] changed the parsed manifest ``m`` of the folder argv[1].
RESEAL = """
import sys
from pathlib import Path
from fluxpart.manifest import manifest_seal, manifest_bytes, read_manifest
from fluxpart.store import file_sha256
d = Path(sys.argv[1]); m = read_manifest(d)
exec(sys.argv[2])
for name, e in m["tables"].items():
    if (d / e["file"]).is_file():
        e["sha256"] = file_sha256(d / e["file"])
m["seal"] = manifest_seal(m)
(d / "manifest.json").write_bytes(manifest_bytes(m))
"""


def fp(*args, env=None, cwd=None, timeout=300):
    return subprocess.run([PY, "-m", "fluxpart", *map(str, args)], env=env or ENV,
                          cwd=cwd or W / "b", capture_output=True, text=True, timeout=timeout)


def start(*args, env=None, cwd=None):
    return subprocess.Popen([PY, "-m", "fluxpart", *map(str, args)], env=env or ENV,
                            cwd=cwd or W / "b", stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True)


def errlines(done):
    return [line for line in done.stderr.splitlines() if line.startswith("error:")]


def one_line(done, code=2):
    lines = [line for line in done.stderr.splitlines() if not line.startswith("warning:")]
    return done.returncode == code and len(lines) == 1 and lines[0].startswith("error:")


def table_digests(folder):
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(Path(folder).glob("*.parquet"))}


def verify(folder, *extra, env=None):
    return fp("verify", "--quiet", folder, *extra, env=env)


def record(name, held, seen):
    results.append((name, held, seen))
    print(f"{'held  ' if held else 'FAILED'} {name}: {seen}", flush=True)


def leftovers(parent):
    """A writer's staging, retired and temporary entries in `parent`."""
    return sorted(p.name for p in Path(parent).iterdir() if ".staging-" in p.name
                  or ".retired-" in p.name or (p.name.startswith(".") and p.name.endswith(".tmp")))


def fresh(name, source="r0"):
    target = W / name
    shutil.rmtree(target, ignore_errors=True)
    shutil.copytree(W / source, target, symlinks=True)
    return target


def setup():
    W.mkdir(parents=True, exist_ok=True)
    sys.path.insert(0, str(TREE / "tests"))
    from bundles import make_bundle
    make_bundle(W / "b")
    text = (W / "b" / "site.toml").read_text()
    (W / "b" / "seed1.toml").write_text(text.replace("seed = 0", "seed = 1"))
    assert fp("run", "site.toml", "--out", W / "r0", "--quiet").returncode == 0
    assert fp("run", "seed1.toml", "--out", W / "r1", "--quiet").returncode == 0


# ------------------------------------------------------------------ signals of schedulers
def stop_when(args, signum, appeared, env=None):
    """Run `args`; send `signum` the moment ``appeared()`` is true (the command has begun
    to write), or never where the command ends first."""
    proc = start(*args, env=env)
    deadline = time.time() + 120
    while proc.poll() is None and time.time() < deadline and not appeared():
        time.sleep(0.005)
    if proc.poll() is None:
        proc.send_signal(signum)
    out, err = proc.communicate(timeout=120)
    return subprocess.CompletedProcess(args, proc.returncode, out, err)


def _entries(folder, prefix=""):
    try:
        return [p for p in Path(folder).iterdir() if p.name.startswith(prefix)]
    except OSError:
        return []


def f_signals():
    """SIGUSR1/SIGUSR2 (a scheduler's warning: Slurm --signal, Grid Engine -notify),
    SIGALRM (`timeout -s ALRM`), SIGPWR (a UPS daemon's power-fail) during each command,
    sent as it begins to write (its staging folder, scratch folder or temporary file)."""
    scratch = W / "tmp_verify"
    cases = [("run", signal.SIGUSR1, ["run", "site.toml", "--out", W / "s_run", "--quiet"],
              lambda: _entries(W, ".s_run.staging-")),
             ("report", signal.SIGUSR2, ["report", "--quiet", W / "s_rep"],
              lambda: _entries(W / "s_rep", ".report.staging-")),
             ("verify", signal.SIGALRM, ["verify", "--quiet", W / "s_ver"],
              lambda: _entries(scratch, "fluxpart-verify-")),
             ("export", getattr(signal, "SIGPWR", signal.SIGUSR1),
              ["export", "--csv", W / "s_csv", W / "s_exp"], lambda: _entries(W, ".s_csv"))]
    for command, signum, args, appeared in cases:
        for name in ("s_run", "s_rep", "s_ver", "s_exp"):
            fresh(name)
        shutil.rmtree(W / "s_csv", ignore_errors=True)
        shutil.rmtree(scratch, ignore_errors=True)
        scratch.mkdir()
        for stale in leftovers(W):              # an earlier case's (before a fix)
            shutil.rmtree(W / stale, ignore_errors=True)
        done = stop_when(args, signum, appeared, env=dict(ENV, TMPDIR=str(scratch)))
        left = leftovers(W) + leftovers(W / "s_rep") + [p.name for p in _entries(scratch)]
        good = verify(W / ("s_" + command[:3]) if command != "export" else W / "s_exp")
        held = (one_line(done, 128 + signum) and not left and good.returncode == 0
                and not (W / "s_csv").exists())
        record(f"{signal.Signals(signum).name} during {command}", held,
               f"exit {done.returncode}, stderr {done.stderr.strip()[-160:]!r}, left {left}, "
               f"verify after {good.returncode}")
    for stale in leftovers(W):                  # not to be counted against later faults
        shutil.rmtree(W / stale, ignore_errors=True) if (W / stale).is_dir() else \
            (W / stale).unlink()


# ------------------------------------------------------------------ an auditor's copies
def f_table_of_other_run():
    cases = (("t_other", "r1", "annual", "annual",
              "a table replaced by the same table of another run (valid Parquet, same schema)"),
             ("t_kind", "r0", "monthly", "daily",
              "a table replaced by another table of the same run (monthly as daily)"))
    for name, source, table, target, label in cases:
        folder = fresh(name)
        shutil.copy2(W / source / f"{table}.parquet", folder / f"{target}.parquet")
        done = verify(folder)
        record(label, done.returncode == 1 and f"{target}.parquet" in done.stdout,
               f"exit {done.returncode}; {done.stdout.splitlines()[:1]}")


def f_manifest_of_other_run():
    folder = fresh("m_other")
    shutil.copy2(W / "r1" / "manifest.json", folder / "manifest.json")
    done = verify(folder)
    record("the manifest of another run (seed 1) copied in", done.returncode == 1
           and "annual" in done.stdout, f"exit {done.returncode}; {done.stdout.splitlines()[1][:150]}")


def f_whole_other_run_with_own_log():
    folder = fresh("w_other", "r1")
    shutil.copy2(W / "r0" / "run-log.json", folder / "run-log.json")
    done = verify(folder)
    rep = fp("report", "--quiet", folder)
    record("another run's tables and manifest with this run's run-log.json",
           done.returncode == 0 and rep.returncode == 0,
           f"verify {done.returncode}, report {rep.returncode} {rep.stderr.strip()[:120]!r}")


# ------------------------------------------------------------------ paths and links
def f_odd_path():
    parent = W / "Ergebnisse 2021 [Turm 1] * ü 結果"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    out = parent / "out [a]*?"
    steps = [fp("run", "site.toml", "--out", out, "--quiet"), verify(out),
             fp("report", "--quiet", out), fp("export", "--csv", parent / "csv [x]", out)]
    again = fp("run", "site.toml", "--out", out, "--quiet")
    record("output folder on a path with spaces, unicode and glob characters",
           all(s.returncode == 0 for s in steps + [again]) and not leftovers(parent)
           and table_digests(out) == table_digests(W / "r0"),
           f"exits {[s.returncode for s in steps + [again]]}, left {leftovers(parent)}")


def f_symlinked_result():
    folder = fresh("linked_target")
    link = W / "linked"
    if link.is_symlink() or link.exists():
        link.unlink()
    link.symlink_to(folder)
    steps = [verify(link), fp("report", "--quiet", link), fp("diff", link, W / "r0")]
    record("a result folder reached through a symbolic link (verify, report, diff)",
           [s.returncode for s in steps] == [0, 0, 0] and link.is_symlink()
           and (folder / "report" / "report.html").is_file(),
           f"exits {[s.returncode for s in steps]}")



# ------------------------------------------------------------------ kills of readers
def f_kill_verify():
    folder, scratch = fresh("kv"), W / "tmp_kill"
    shutil.rmtree(scratch, ignore_errors=True)
    scratch.mkdir()
    env = dict(ENV, TMPDIR=str(scratch))
    done = stop_when(["verify", "--quiet", folder], signal.SIGKILL,
                     lambda: _entries(scratch, "fluxpart-verify-"),
                     env=env)
    again = verify(folder, env=env)
    record("kill -9 during verify, then verify again", done.returncode == -9
           and again.returncode == 0 and not _entries(scratch),
           f"exit {done.returncode}, verify after {again.returncode}, scratch left "
           f"{[p.name for p in _entries(scratch)]}")


def f_kill_report():
    folder = fresh("kr")
    fp("report", "--quiet", folder)
    done = stop_when(["report", "--quiet", folder], signal.SIGKILL,
                     lambda: _entries(folder, ".report.staging-"))
    after = verify(folder)
    again = fp("report", "--quiet", folder)
    record("kill -9 during report, then verify and report", done.returncode == -9
           and after.returncode == 0 and again.returncode == 0 and not leftovers(folder),
           f"exit {done.returncode}, verify {after.returncode}, report {again.returncode}, "
           f"left {leftovers(folder)}")


def f_clock_set_back_staging():
    """A run killed while it staged its result, then the clock set back: its staging
    folder (here a copy of a result, as a killed writer leaves it) is dated 3 days
    ahead of any later writer's start."""
    folder = fresh("cb")
    stale = W / ".cb.staging-k1ll3d00"
    shutil.rmtree(stale, ignore_errors=True)
    shutil.copytree(W / "r1", stale)
    ahead = time.time() + 3 * 86400
    os.utime(stale, (ahead, ahead))
    noted = fp("verify", folder)
    again = fp("run", "site.toml", "--out", folder, "--quiet")
    record("a killed run's staging folder dated in the future (clock set back), then run",
           noted.returncode == 0 and again.returncode == 0 and not leftovers(W)
           and verify(folder).returncode == 0,
           f"verify before {noted.returncode}, run {again.returncode}, left {leftovers(W)}")


# ------------------------------------------------------------------ the machine's settings
def f_environment_bytes():
    base = table_digests(W / "r0")
    cases = {"TZ=Pacific/Kiritimati LANG=tr_TR.UTF-8 LC_ALL=C.utf8":
                 dict(TZ="Pacific/Kiritimati", LANG="tr_TR.UTF-8", LC_ALL="C.utf8"),
             "PYTHONHASHSEED=4242": dict(PYTHONHASHSEED="4242"),
             "two threads in every pool": dict(OMP_NUM_THREADS="2", OPENBLAS_NUM_THREADS="2",
                                               MKL_NUM_THREADS="2", NUMEXPR_NUM_THREADS="2")}
    for label, extra in cases.items():
        out = W / ("env_" + str(abs(hash(label)) % 1000))
        shutil.rmtree(out, ignore_errors=True)
        done = fp("run", "site.toml", "--out", out, "--quiet", env=dict(ENV, **extra))
        same = table_digests(out) == base
        ok = verify(out, env=dict(ENV, **extra)).returncode == 0
        record(f"run under {label}: tables byte-identical", done.returncode == 0 and same and ok,
               f"exit {done.returncode}, identical {same}, verify {ok}")


def f_concurrent_two_folders():
    outs = [W / "c1", W / "c2"]
    for out in outs:
        shutil.rmtree(out, ignore_errors=True)
    procs = [start("run", "site.toml", "--out", out, "--quiet") for out in outs]
    codes = [p.wait() for p in procs]
    same = all(table_digests(o) == table_digests(W / "r0") for o in outs)
    record("two runs of one config at once into two folders", codes == [0, 0] and same
           and not leftovers(W), f"exits {codes}, identical {same}")


# ------------------------------------------------------------------ injected errors
_INJECT = r"""
import errno, os, sys, builtins
import fluxpart.cli as cli
code, name, match = int(sys.argv[1]), sys.argv[2], sys.argv[3]
import io
real = getattr(os, name) if name != "open" else io.open
def failing(path, *args, **kwargs):
    if match in (os.fsdecode(path) if isinstance(path, (str, bytes, os.PathLike)) else ""):
        raise OSError(code, os.strerror(code), os.fsdecode(path))
    return real(path, *args, **kwargs)
if name == "open":
    builtins.open = io.open = failing
else:
    setattr(os, name, failing)
sys.exit(cli.main(sys.argv[4:]))
"""


def injected(code, name, match, *args):
    return subprocess.run([PY, "-c", _INJECT, str(code), name, match, *map(str, args)],
                          env=ENV, cwd=W / "b", capture_output=True, text=True, timeout=300)


def f_injected():
    import errno
    cases = [("disk quota (EDQUOT) writing the report page", errno.EDQUOT, "replace",
              "report.html", ["report", "--quiet", "{folder}"]),
             ("stale NFS handle (ESTALE) reading a table in verify", errno.ESTALE, "open",
              "daily.parquet", ["verify", "--quiet", "{folder}"]),
             ("a name the file system refuses (EINVAL, FAT) in run", errno.EINVAL, "replace",
              "annual.parquet", ["run", "seed1.toml", "--out", "{folder}", "--quiet"]),
             ("I/O error (EIO) reading the input in run", errno.EIO, "open",
              "tower.csv", ["run", "seed1.toml", "--out", "{folder}", "--quiet"]),
             ("disk quota (EDQUOT) writing a CSV export", errno.EDQUOT, "open",
              ".csv", ["export", "--csv", W / "inj_csv", "{folder}"]),
             ("stale NFS handle (ESTALE) writing the manifest in run", errno.ESTALE, "replace",
              "manifest.json", ["run", "seed1.toml", "--out", "{folder}", "--quiet"])]
    for number, (label, code, name, match, args) in enumerate(cases):
        folder = fresh(f"inj{number}")
        fp("report", "--quiet", folder)
        page = (folder / "report" / "report.html").read_bytes()
        shutil.rmtree(W / "inj_csv", ignore_errors=True)
        before = table_digests(folder)
        done = injected(code, name, match, *[str(a).format(folder=folder) for a in args])
        page_now = folder / "report" / "report.html"
        intact = (table_digests(folder) == before and verify(folder).returncode == 0
                  and page_now.is_file() and page_now.read_bytes() == page)
        fits = not (code != errno.EACCES and "readable by this user" in done.stderr)
        record(label, one_line(done) and intact and not leftovers(W) and not leftovers(folder)
               and not (W / "inj_csv").exists() and fits,
               f"exit {done.returncode}, stderr {done.stderr.strip()[-200:]!r}, intact {intact}")


# ------------------------------------------------------------------ input changing
def f_input_changing():
    bundle = W / "chg"
    shutil.rmtree(bundle, ignore_errors=True)
    shutil.copytree(W / "b", bundle)
    out = W / "chg_out"
    shutil.rmtree(out, ignore_errors=True)
    proc = start("run", "site.toml", "--out", out, "--quiet", cwd=bundle)
    lines = (bundle / "tower.csv").read_text().splitlines(keepends=True)
    time.sleep(0.3)
    with open(bundle / "tower.csv", "w") as handle:     # rewritten in place (a logger's sync)
        handle.write("".join(lines[:-48]))
    proc.communicate(timeout=120)
    held = proc.returncode == 2 or (proc.returncode == 0 and verify(out).returncode in (0, 1))
    if proc.returncode == 0:
        held = verify(out).returncode == 0
    record("the input rewritten shorter while run reads it", held and not leftovers(W),
           f"exit {proc.returncode}, verify {verify(out).returncode if out.exists() else '-'}")


def f_moved_during_report():
    folder = fresh("mvd")
    moved = W / "mvd moved"
    shutil.rmtree(moved, ignore_errors=True)
    proc = start("report", "--quiet", folder)
    deadline = time.time() + 60
    while time.time() < deadline and proc.poll() is None and not any(
            p.name.startswith(".report.staging-") for p in folder.iterdir()):
        time.sleep(0.01)
    folder.rename(moved)
    out, err = proc.communicate(timeout=120)
    good = verify(moved)
    record("the result folder moved while report draws its page", (one_line(
        subprocess.CompletedProcess([], proc.returncode, out, err)) and "was moved" in err
        or proc.returncode == 0) and not folder.exists() and good.returncode == 0,
        f"exit {proc.returncode}, {err.strip()[:120]!r}, old path exists {folder.exists()}, "
        f"verify {good.returncode}")


def f_other_platform_verify():
    folder = fresh("plat")
    code = ("m['versions'].update(python='3.11.9', numpy='2.4.2', pandas='3.0.4', "
            "pyarrow='25.0.0'); m['platform'].update(machine='aarch64', "
            "numpy_cpu_features=['NEON', 'ASIMD'])")
    subprocess.run([PY, "-c", RESEAL, str(folder), code], env=ENV, check=True)
    done = fp("verify", folder)
    record("verify of a result written on another CPU, Python patch and library versions",
           done.returncode == 0 and "3.11.9" in done.stdout and "aarch64" in done.stdout,
           f"exit {done.returncode}, {len(done.stdout.splitlines())} lines")


# ------------------------------------------------------------------ batch on Dask
NET = W / "net"


def make_net(out_name="out"):
    shutil.rmtree(NET, ignore_errors=True)
    for site in "abcd":
        (NET / site).mkdir(parents=True)
        shutil.copy2(W / "b" / "tower.csv", NET / site / "tower.csv")
        text = (W / "b" / "site.toml").read_text()
        (NET / site / "site.toml").write_text(text.replace("Quillmoor grassland (fictional)",
                                                          f"Quillmoor {site} (fictional)"))
    (NET / "sites.toml").write_text(f'[batch]\nsites = ["*/site.toml"]\nout = "{out_name}"\n')


def descendants(pid):
    found, todo = [], [pid]
    while todo:
        parent = todo.pop()
        done = subprocess.run(["ps", "-o", "pid=", "--ppid", str(parent)], capture_output=True,
                              text=True)
        children = [int(x) for x in done.stdout.split()]
        found += children
        todo += children
    return found


def sites_verify(out):
    folders = sorted(p for p in Path(out).iterdir() if (p / "manifest.json").is_file())
    return [verify(p).returncode for p in folders]


def f_batch_stopped():
    for signum in (signal.SIGTERM, signal.SIGUSR1):
        make_net()
        proc = start("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
        deadline = time.time() + 90
        while time.time() < deadline and proc.poll() is None and not (
                (NET / "out").exists() and list((NET / "out").glob("*/manifest.json"))):
            time.sleep(0.05)
        kids = descendants(proc.pid)
        proc.send_signal(signum)
        out, err = proc.communicate(timeout=120)
        time.sleep(3)
        orphans = [(k, _cmdline(k)[-60:]) for k in kids if Path(f"/proc/{k}").exists()]
        left = leftovers(NET / "out") if (NET / "out").exists() else []
        codes = sites_verify(NET / "out") if (NET / "out").exists() else []
        rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
        lines = [line for line in err.splitlines() if not line.startswith("warning:")]
        record(f"{signal.Signals(signum).name} of a Dask batch with some sites finished",
               proc.returncode == 128 + signum and len(lines) == 1 and not orphans
               and not left and all(c == 0 for c in codes) and rerun.returncode == 0
               and sites_verify(NET / "out") == [0] * 4,
               f"exit {proc.returncode}, stderr {err.strip()[-150:]!r}, {len(codes)} sites "
               f"written, orphans {orphans}, left {left}, rerun {rerun.returncode} "
               f"{[x for x in rerun.stderr.splitlines() if x.startswith('error')][:2]}")


def f_batch_group_signal():
    """A scheduler's signal to every process of the job (Slurm's time limit: SIGTERM to
    all; its --signal: SIGUSR1 to all), the Dask workers included."""
    for signum in (signal.SIGTERM, signal.SIGUSR1, signal.SIGHUP):
        make_net()
        proc = subprocess.Popen([PY, "-m", "fluxpart", "batch", "sites.toml", "--quiet",
                                 "--workers", "2"], env=ENV, cwd=NET, stdout=subprocess.PIPE,
                                stderr=subprocess.PIPE, text=True, start_new_session=True)
        deadline = time.time() + 90
        while time.time() < deadline and proc.poll() is None and not (
                (NET / "out").exists() and list((NET / "out").glob("*/manifest.json"))):
            time.sleep(0.05)
        kids = descendants(proc.pid)
        os.killpg(proc.pid, signum)
        out, err = proc.communicate(timeout=120)
        time.sleep(3)
        orphans = [(k, _cmdline(k)[-60:]) for k in kids if Path(f"/proc/{k}").exists()]
        left = leftovers(NET / "out") if (NET / "out").exists() else []
        codes = sites_verify(NET / "out") if (NET / "out").exists() else []
        lines = [line for line in err.splitlines() if not line.startswith("warning:")]
        rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
        record(f"{signal.Signals(signum).name} to every process of a Dask batch (workers too)",
               proc.returncode == 128 + signum and len(lines) == 1 and not orphans
               and not left and all(c == 0 for c in codes) and rerun.returncode == 0,
               f"exit {proc.returncode}, {len(lines)} stderr lines {lines[:3]!r:.300}, "
               f"{len(codes)} sites, orphans {orphans}, left {left}, rerun {rerun.returncode}")


def f_batch_worker_killed():
    make_net()
    proc = start("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET)
    victim, deadline = None, time.time() + 60
    while victim is None and time.time() < deadline and proc.poll() is None:
        busy = (NET / "out").exists() and any(".staging-" in p.name
                                              for p in (NET / "out").iterdir())
        if busy:
            kids = descendants(proc.pid)
            grand = [k for k in kids if k not in descendants_direct(proc.pid)
                     and "forkserver" in _cmdline(k) and _parent(k) in kids]
            victim = grand[-1] if grand else None
        time.sleep(0.05)
    if victim:
        os.kill(victim, signal.SIGKILL)
    out, err = proc.communicate(timeout=300)
    codes = sites_verify(NET / "out")
    record("a Dask worker killed (as by the OOM killer) while a site is written",
           victim is not None and proc.returncode == 0 and codes == [0] * 4
           and not leftovers(NET / "out"),
           f"killed {victim}, exit {proc.returncode}, sites verify {codes}, "
           f"stderr {[line for line in err.splitlines() if line.startswith('error')][:2]}")


def descendants_direct(pid):
    done = subprocess.run(["ps", "-o", "pid=", "--ppid", str(pid)], capture_output=True, text=True)
    return [int(x) for x in done.stdout.split()]


def _cmdline(pid):
    try:
        return Path(f"/proc/{pid}/cmdline").read_bytes().decode(errors="replace")
    except OSError:
        return ""


def _parent(pid):
    try:
        return int(Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[1])
    except OSError:
        return None


def f_batch_odd_out():
    make_net("Netz Ergebnisse ü [2021]")
    done = fp("batch", "sites.toml", "--quiet", cwd=NET)
    out = NET / "Netz Ergebnisse ü [2021]"
    codes = sites_verify(out) if out.exists() else []
    record("a batch into a folder with spaces, unicode and brackets", done.returncode == 0
           and codes == [0] * 4, f"exit {done.returncode}, verify {codes}")


FAULTS = [f_signals, f_table_of_other_run, f_manifest_of_other_run,
          f_whole_other_run_with_own_log, f_odd_path, f_symlinked_result, f_kill_verify,
          f_kill_report, f_clock_set_back_staging, f_environment_bytes,
          f_concurrent_two_folders, f_injected, f_moved_during_report,
          f_other_platform_verify, f_input_changing, f_batch_stopped, f_batch_group_signal,
          f_batch_worker_killed, f_batch_odd_out]

if __name__ == "__main__":
    wanted = [a for a in sys.argv[1:] if a.startswith("f_")]
    if not (W / "r1").exists():
        setup()
    for fault in FAULTS:
        if not wanted or fault.__name__ in wanted:
            fault()
    print(f"held {sum(r[1] for r in results)} of {len(results)} ({W})")
