"""Probe: result-safety faults as an operator, an auditor and a batch user meet them.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_faults.py``
(``--dir DIR`` for the scratch folder, default a new temporary one; names of fault
functions, e.g. ``f_signals f_injected``, to run only those). Rounds faults35 and faults36.

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

Round faults36 (machine and file-system faults; mount(8) and chattr(1) need root, and
a container that refuses them leaves those faults unprobed): a file-size limit, too few
file descriptors, a memory limit and a small stack (setrlimit(2)); a real full disk (a small tmpfs); a
result made immutable or put on a read-only mount; the input a FIFO, a link, renamed
over or cut mid-row while read, a 100 MB line, a damaged compressed copy; the out folder
a link, a file, another tool's folder, on a non-UTF-8 path or a path with quotes; two
runs into one folder; a stale lock of another host; damaged tables and manifests given
to verify; a decimal-comma locale and an unknown TZ (bytes); files dated 2100; hard-linked
copies; a report folder linked to the user's; a batch killed with -9, on a full disk and
under ulimit -n.

Round faults37: a result folder named with a line break and a tab in every command's
output; report under ulimit -v 290-330 MB (memory only, no reinstall hint); what run
--quiet promises; a batch on a full tmpfs (failure kind, a rerun of the missing sites
only); SIGTERM and SIGINT during export --netcdf and report; one table replaced by
another run's under a valid manifest; diff of a folder of release 0.30.0 (605729f
unpacked with git archive under the scratch folder) and a new one; the input's tmpfs
unmounted lazily (umount -l) while run holds it open.

Round faults39 (long and shared use): two sites at once into one new parent; ``cp -r``
of a result while run replaces it (each kind of copy verified); a result on a noexec,
nosuid tmpfs; a copy without times or rights (FAT-like); report/ deleted or a user's
file; verify with --input twice; the config a link retargeted after run; clashing batch
stems and one config matched twice; verify, diff and report into ``head -c 20``; a new
--out on a read-only bind mount; hash seed and thread counts differing between run and
verify --exact; two reports at once; ``--out .``; a CSV export into the result; ten
years of 1-minute records, with memory to spare and under ulimit -v; a batch rerun over
a site left half-staged.

Round faults40 (machine faults during run, batch, verify, report and export): SIGTERM,
SIGINT and SIGKILL at ten named points of run (``_STOP_AT`` patches the function at the
point to signal its own process: reading, the u* runs, tables 1, 5 and 9, the run log,
the manifest, the swap, after the exchange, between two renames of a file system without
an atomic exchange), and sent twice (during run, report and export --csv); a real full
disk at each stage of run's writing, under report and export --netcdf; the wall clock
stepped back mid-run; damaged Parquet footers; report while run replaces the folder; a
read-only HOME; TMPDIR missing or read-only; printed numbers under de_DE; stdin closed
under run and batch; Ctrl-C twice to a batch; the batch process killed alone; an external
Dask scheduler killed; the result's parent renamed mid-run; a stop while waiting for a
lock; a batch stopped (once, twice, -9) as it replaces a network table.

Round faults42 (result safety and a portable verify, again): kill -9 at 20 seeded
random moments of run into an earlier result (10 over its writing), and at random
moments of report, export --netcdf and export --csv; a result zipped and unzipped
(unzip, Python's zipfile); the input re-saved with CRLF and by a spreadsheet; a table
rewritten with its values (pandas; pyarrow with gzip); a batch site's folder alone; two
runs of other seeds at once into an existing result, verify looping; the input appended
to while read; --out a link to a result on another disk, killed mid-run; the JSON files
with CRLF (git autocrlf); manifest numbers edited and respelled; --netcdf a link to a
shared file and a link into no folder; a stopped run's staging given as a result;
verify --json read by an auditor's script under three locales.

Round faults43 (result safety and a portable verify, again): --out a result holding the
input, the input folder's parent or the input's folder; a result moved up one level and
copied deeper, its input left in place; the package at another path; other pandas and
pyarrow versions reported; a table cut and padded to its size (times kept, and under a
resealed manifest); a result renamed with spaces, non-ASCII letters and to NFD; export
into a folder of the user's files or an earlier export, --netcdf a folder or into the
result; fluxpart.load looped while runs replace the folder; kill -9 of a 2-worker batch at
seeded moments while it replaces a network; Ctrl-C to ``run | tee``; a moved result's run
log pointing beside another file of the input's name.

Round faults44 (a network on Dask): --scheduler a service that speaks no Dask, where
nothing listens, without a port, http:// and tls://; every site failing and two of three
(what the network tables' reader says); the worker of one site killed on every try; a
site spinning in Python past the time limit; a site key reassigned by a changed listing;
one config listed in five spellings; verify of the batch output folder; one worker's peak
memory over 4 site-years.

Round faults45 (a network folder as an auditor and a returning user meet it; faults
named ``f45_*``): failures.parquet relabelled by fluxpart's own writer, rewritten by
pandas and deleted; ``--scheduler ""``; a network folder copied with ``cp -r`` and the
batch rerun into the copy; moved two levels deeper; network.json re-saved with a BOM and
CRLF; report, export and diff given the network folder; a batch resumed after a site's
config changed and after its network file dropped and added sites; a site config and a
network file with a BOM and CRLF, a config saved as UTF-16; ``report --out`` the result
itself, another result or a network folder; ``run --out`` a network folder and ``batch
--out`` a result; SIGTERM to verify of a network as its scratch folder appears; ``verify
.`` and ``report .`` inside a result; a site folder replaced by its copy and by another
run's; two verify of one network at once.

Round faults46 (faults named ``f46_*``): --out whose last name is 255 or 256 bytes
(ASCII, three-byte letters) and 237; run --out the input file itself; --out inside the
input's folder, run twice and the folder copied; the input deleted between check and run;
manifest.json pretty-printed or minified by an editor; a table renamed ``.parquet.bak``
and a backup copy beside a table; two verify of one result at once; verify as another
user (setpriv) with TMPDIR writable and not; run, report and export by that user into
root's result; report as that user with MPLCONFIGDIR
unwritable and HOME unset; run, report and export under tr_TR.UTF-8 (where the locale is
installed); nice with 2 threads and far time zones (bytes); a batch of 0-byte configs
and inputs; Ctrl-C to verify as its scratch appears; times rounded to 2 s; --out below a
link loop; verify of a network with one site's input missing; diff of a zero annual part
against a float residue.

Round faults48 (faults named ``f48_*``): kill -9 of a lock holder while another run
waits, and of the waiter; three runs at once into one folder; kill -9 at seeded moments of
a first run, of report (then run), of a whole batch (then the batch again); another tool's
manifest.json; EROFS, EDQUOT, ENOSPC and EIO injected at each step of writing; a result
moved across file systems; a table linked to another seed's; a bundle and result tarred and
verified elsewhere with relative paths and 2 threads; one CPU; the input edited by a digit,
a newline, a BOM or a column name; a manifest key written twice; the clock a year back
between runs; a sibling named r.staging-1 written at once; --out a mount point; a read-only
copy verified by another user; tables swapped by name; run, report and export waiting on a
lock under --quiet; a reader's repair under another's lock; the run log lost; another
result's report page.

Round faults38 (the machine's environment): verify looped while run replaces a folder;
--out below a dangling link, below a file, a device node; standard streams closed, full
or read by a reader that leaves at once; a non-ASCII site and paths under C, ASCII and
Latin-1 locales (verified under UTF-8); report and CSV under a decimal-comma locale and
the farthest zones; matplotlib's configuration a file, a user's matplotlibrc, no HOME;
TMPDIR a dangling link or a full tmpfs; umask 077 and 777; paths 300 and 4200 bytes
deep; a logger appending; the input edited after check; the clock at 1970 and 2099
(time.time patched by a sitecustomize); nice with ulimit -t; ulimit -n 16 under the
readers; ulimit -d (RLIMIT_DATA) under run, verify, report, export and batch, ulimit -v
under export --netcdf; nohup, SIGTSTP/SIGCONT/SIGWINCH, SIGCHLD ignored, SIGQUIT;
verify's report saved inside the result; a deleted current folder (run, verify, batch);
two CSV exports at once; no file locks (ENOLCK); BLAS kernels and NumPy's SIMD cut
back; a batch's scratch on a full tmpfs or without HOME.
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
                          cwd=cwd or W / "b", capture_output=True, text=True, timeout=timeout,
                          errors="backslashreplace")


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
    # --quiet prints the verdict only, which names the likely cause (not each table)
    record("the manifest of another run (seed 1) copied in", done.returncode == 1
           and ("annual" in done.stdout or "likely another run's" in done.stdout),
           f"exit {done.returncode}; {done.stdout.splitlines()[0][-150:]}")


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


def linked(name, target):
    """A symbolic link `name` in the scratch folder to `target`, made afresh."""
    link = W / name
    if link.is_symlink() or link.exists():
        link.unlink()
    link.symlink_to(target)
    return link


def f_symlinked_result():
    folder = fresh("linked_target")
    link = linked("linked", folder)
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


def batch_with_a_site_written():
    """A new network's batch on two Dask workers, in a session of its own, returned once
    its first site folder is written (or after 90 s)."""
    make_net()
    proc = subprocess.Popen([PY, "-m", "fluxpart", "batch", "sites.toml", "--quiet",
                             "--workers", "2"], env=ENV, cwd=NET, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, start_new_session=True)
    deadline = time.time() + 90
    while time.time() < deadline and proc.poll() is None and not (
            (NET / "out").exists() and list((NET / "out").glob("*/manifest.json"))):
        time.sleep(0.05)
    return proc


def _after_batch_stop(proc, kids):
    """What a stopped batch `proc` (its processes `kids`) left: processes still alive,
    leftovers, each written site's verify, its standard error's lines but warnings, and
    the rerun."""
    out, err = proc.communicate(timeout=120)
    time.sleep(3)
    orphans = [(k, _cmdline(k)[-60:]) for k in kids if Path(f"/proc/{k}").exists()]
    left = leftovers(NET / "out") if (NET / "out").exists() else []
    codes = sites_verify(NET / "out") if (NET / "out").exists() else []
    lines = [line for line in err.splitlines() if not line.startswith("warning:")]
    return orphans, left, codes, lines, fp("batch", "sites.toml", "--quiet", cwd=NET)


def f_batch_group_signal():
    """A scheduler's signal to every process of the job (Slurm's time limit: SIGTERM to
    all; its --signal: SIGUSR1 to all), the Dask workers included."""
    for signum in (signal.SIGTERM, signal.SIGUSR1, signal.SIGHUP):
        proc = batch_with_a_site_written()
        kids = descendants(proc.pid)
        os.killpg(proc.pid, signum)
        orphans, left, codes, lines, rerun = _after_batch_stop(proc, kids)
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


# ------------------------------------------------------------------ round faults36
def limited(limits, *args, env=None, cwd=None, user=None, timeout=300):
    """:func:`fp` with resource limits ``{resource.RLIMIT_X: soft}`` (and, as root, another
    user id) set in the child before it starts Python."""
    import resource

    def apply():
        for which, soft in limits.items():
            resource.setrlimit(which, (soft, resource.getrlimit(which)[1]))
        if user is not None:
            os.setgid(user)
            os.setuid(user)
    return subprocess.run([PY, "-m", "fluxpart", *map(str, args)], env=env or ENV,
                          cwd=cwd or W / "b", capture_output=True, text=True,
                          timeout=timeout, preexec_fn=apply)


def _intact(folder, before):
    return table_digests(folder) == before and verify(folder).returncode == 0


def _stderr_tail(done, width=150):
    return repr(done.stderr.strip()[-width:])


def f_file_size_limit():
    """``ulimit -f`` (RLIMIT_FSIZE; Python ignores SIGXFSZ, so a write past it fails with
    EFBIG, setrlimit(2) (m)): run replacing a result, report and a CSV export."""
    import resource
    for command in ("run", "report", "export"):
        folder = fresh(f"fsz_{command}")
        shutil.rmtree(W / "fsz_csv", ignore_errors=True)
        before = table_digests(folder)
        args = {"run": ["run", "seed1.toml", "--out", folder, "--quiet"],
                "report": ["report", "--quiet", folder],
                "export": ["export", "--csv", W / "fsz_csv", folder]}[command]
        done = limited({resource.RLIMIT_FSIZE: 60_000}, *args)
        record(f"a file-size limit of 60 kB (ulimit -f) during {command}",
               one_line(done) and _intact(folder, before) and not leftovers(W)
               and not leftovers(folder) and not (W / "fsz_csv").exists()
               and not (folder / "report").exists(),
               f"exit {done.returncode}, stderr {_stderr_tail(done)}, left "
               f"{leftovers(W) + leftovers(folder)}")


def f_open_file_limit():
    """``ulimit -n`` from 8 to 64 during a run that replaces a result: each either
    completes with the same tables or stops with one line, the old result whole."""
    import resource
    seen = []
    for limit in (8, 16, 24, 32, 48, 64):
        folder = fresh("nofile")
        before = table_digests(folder)
        done = limited({resource.RLIMIT_NOFILE: limit}, "run", "seed1.toml", "--out", folder,
                       "--quiet")
        fine = ((done.returncode == 0 and table_digests(folder) == table_digests(W / "r1"))
                or (one_line(done) and _intact(folder, before)))
        seen.append((limit, done.returncode, fine, done.stderr.strip()[-90:]))
    record("too few file descriptors (ulimit -n 8 .. 64) during run",
           all(s[2] for s in seen) and not leftovers(W), f"{seen}")


def _limited_or_hung(limits, *args, timeout=120):
    try:
        return limited(limits, *args, timeout=timeout)
    except subprocess.TimeoutExpired:
        return subprocess.CompletedProcess(args, "hung", "", f"(still running after {timeout} s)")


def f_memory_limit():
    """An address-space limit (``ulimit -v``, RLIMIT_AS) met at several points of a run
    with 2000 u* bootstrap and 5000 Monte Carlo draws (from loading the libraries to the
    Monte Carlo), and of verify and report."""
    import resource
    text = (W / "b" / "site.toml").read_text()
    (W / "b" / "heavy.toml").write_text(text.replace(
        'ustar_method = "fixed"\nustar_threshold = 0.2\n', "ustar_bootstrap_draws = 2000\n")
        .replace("random_error_draws = 20", "random_error_draws = 5000"))
    for command, sizes in (("run", (100, 160, 200, 250, 300, 350, 400, 500)),
                           ("verify", (100, 160, 200, 300)), ("report", (160, 300, 360))):
        seen = _limit_sweep(resource.RLIMIT_AS, command, sizes, "heavy.toml", "mem")
        record(f"a memory limit (ulimit -v {sizes[0]} .. {sizes[-1]} MB) during {command}"
               + (" of 2000 u* bootstrap and 5000 Monte Carlo draws" if command == "run"
                  else ""), all(s[2] for s in seen) and not leftovers(W), f"{seen}")


def _limit_sweep(which, command, sizes, config, name):
    """`command` (run of `config`, verify or report) on a fresh copy `name` of a result
    under the memory limit `which` (a resource.RLIMIT_*) at each of `sizes` MB: for each,
    (size, exit, whether it completed right or stopped with one line, the folder whole,
    the end of standard error)."""
    seen = []
    for megabytes in sizes:
        folder = fresh(name)
        before = table_digests(folder)
        args = {"run": ["run", config, "--out", folder, "--quiet"],
                "verify": ["verify", "--quiet", folder],
                "report": ["report", "--quiet", folder],
                "export": ["export", "--netcdf", W / f"{name}.nc", folder]}[command]
        (W / f"{name}.nc").unlink(missing_ok=True)
        done = _limited_or_hung({which: megabytes << 20}, *args)
        fine = (done.returncode == 0 and verify(folder).returncode == 0) or (
            one_line(done) and _intact(folder, before) and not leftovers(folder))
        seen.append((megabytes, done.returncode, fine, done.stderr.strip()[-50:]))
    return seen


def _bundle(name):
    bundle = W / name
    shutil.rmtree(bundle, ignore_errors=True)
    shutil.copytree(W / "b", bundle)
    return bundle


def f_input_fifo():
    bundle = _bundle("fifo")
    (bundle / "tower.csv").unlink()
    os.mkfifo(bundle / "tower.csv")
    out = W / "fifo_out"
    shutil.rmtree(out, ignore_errors=True)
    try:
        done = fp("run", "site.toml", "--out", out, "--quiet", cwd=bundle, timeout=60)
    except subprocess.TimeoutExpired:
        done = subprocess.CompletedProcess([], "hang", "", "(hung 60 s)")
    record("the input replaced by a named pipe (FIFO) with no writer",
           one_line(done) and "tower.csv" in done.stderr and not out.exists(),
           f"exit {done.returncode}, stderr {_stderr_tail(done)}")


def f_input_symlink():
    bundle = _bundle("isym")
    real = W / "isym_data" / "tower.csv"
    real.parent.mkdir(exist_ok=True)
    shutil.move(bundle / "tower.csv", real)
    (bundle / "tower.csv").symlink_to(real)
    out = W / "isym_out"
    shutil.rmtree(out, ignore_errors=True)
    done = fp("run", "site.toml", "--out", out, "--quiet", cwd=bundle)
    same = table_digests(out) == table_digests(W / "r0") if out.exists() else False
    record("the input file replaced by a symbolic link to it", done.returncode == 0 and same
           and verify(out).returncode == 0, f"exit {done.returncode}, identical {same}")


def f_out_symlink():
    target = fresh("osym_target")
    link = linked("osym", target)
    done = fp("run", "seed1.toml", "--out", link, "--quiet")
    through = (link.is_symlink() and table_digests(link) == table_digests(W / "r1")
               and verify(link).returncode == 0)
    refused = one_line(done) and link.is_symlink() and table_digests(target) == \
        table_digests(W / "r0")
    record("run --out a symbolic link to an earlier result", (done.returncode == 0 and through)
           or refused, f"exit {done.returncode}, link kept {link.is_symlink()}, "
           f"written through {through}, stderr {_stderr_tail(done)}, left {leftovers(W)}")


def f_out_is_file():
    out = W / "ofile"
    shutil.rmtree(out, ignore_errors=True)
    out.write_text("a lab notebook\n")
    done = fp("run", "site.toml", "--out", out, "--quiet")
    record("run --out an existing regular file", one_line(done) and out.read_text() ==
           "a lab notebook\n" and not leftovers(W), f"exit {done.returncode}, stderr "
           f"{_stderr_tail(done)}")


def f_out_not_utf8():
    parent = W / os.fsdecode(b"Ergebnis-\xff\xfe-latin1-\xe9t\xe9")
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    out = parent / os.fsdecode(b"out-\xe4")
    steps = [fp("run", "site.toml", "--out", out, "--quiet"), verify(out),
             fp("report", "--quiet", out), fp("export", "--csv", parent / "csv", out),
             fp("run", "site.toml", "--out", out, "--quiet")]
    same = table_digests(out) == table_digests(W / "r0") if out.exists() else False
    record("a result folder on a path whose bytes are not UTF-8 (run, verify, report, "
           "export, run again)", all(s.returncode == 0 for s in steps) and same
           and not leftovers(parent), f"exits {[s.returncode for s in steps]}, identical "
           f"{same}, {[e for s in steps for e in errlines(s)][:1]}")


def f_same_folder_twice():
    out = W / "same"
    shutil.rmtree(out, ignore_errors=True)
    procs = [start("run", "site.toml", "--out", out, "--quiet"),
             start("run", "seed1.toml", "--out", out, "--quiet")]
    done = [p.communicate(timeout=300) for p in procs]
    codes = [p.returncode for p in procs]
    digests = table_digests(out)
    whole = digests in (table_digests(W / "r0"), table_digests(W / "r1"))
    record("two runs (seeds 0 and 1) at once into the same folder", codes == [0, 0] and whole
           and verify(out).returncode == 0 and not leftovers(W),
           f"exits {codes}, one run's tables whole {whole}, stderr {[d[1][-80:] for d in done]}")


def f_other_tools_folder():
    out = W / "foreign"
    shutil.rmtree(out, ignore_errors=True)
    out.mkdir()
    (out / "tower_2021.nc").write_bytes(b"CDF\x01" + bytes(100))
    (out / "notes.txt").write_text("field notes\n")
    (out / "summary.parquet").write_bytes((W / "r0" / "annual.parquet").read_bytes())
    done = fp("run", "site.toml", "--out", out, "--quiet")
    names = sorted(p.name for p in out.iterdir())
    record("run into a folder holding another tool's files (a NetCDF, notes, a Parquet)",
           one_line(done) and names == ["notes.txt", "summary.parquet", "tower_2021.nc"]
           and not leftovers(W), f"exit {done.returncode}, stderr {_stderr_tail(done)}, "
           f"folder {names}")


def f_stale_lock_other_host():
    folder = fresh("slock")
    lock = W / ".slock.lock"
    lock.write_text("pid 48211 on tower-gateway-02\n")
    old = time.time() - 40 * 86400
    os.utime(lock, (old, old))
    done = fp("run", "seed1.toml", "--out", folder, "--quiet", timeout=120)
    record("a stale lock file left by a run killed on another host", done.returncode == 0
           and table_digests(folder) == table_digests(W / "r1") and not leftovers(W),
           f"exit {done.returncode}, stderr {_stderr_tail(done)}, lock left {lock.exists()}")


def f_verify_damaged():
    cases = []
    folder = fresh("vd_trunc")
    data = (folder / "daily.parquet").read_bytes()
    (folder / "daily.parquet").write_bytes(data[: len(data) // 2])
    cases.append(("a Parquet table truncated to half", folder, "daily.parquet"))
    folder = fresh("vd_json")
    data = (folder / "manifest.json").read_bytes()
    (folder / "manifest.json").write_bytes(data[: len(data) * 2 // 3])
    cases.append(("a manifest truncated (invalid JSON)", folder, "manifest.json"))
    folder = fresh("vd_edit")
    text = (folder / "manifest.json").read_text()
    (folder / "manifest.json").write_text(text.replace('"seed": 0', '"seed": 7', 1))
    cases.append(("a manifest hand-edited (seed 0 -> 7, not resealed)", folder, "seed"))
    folder = fresh("vd_zero")
    (folder / "annual.parquet").write_bytes(b"")
    cases.append(("a Parquet table emptied to 0 bytes", folder, "annual.parquet"))
    for label, folder, named in cases:
        done = fp("verify", folder)
        tb = "Traceback" in done.stderr
        record(f"verify of {label}", done.returncode in (1, 2) and not tb
               and named in done.stdout + done.stderr and (done.returncode == 1 or
                                                           one_line(done)),
               f"exit {done.returncode}, names it {named in done.stdout + done.stderr}, "
               f"traceback {tb}, {(done.stdout + done.stderr).strip().splitlines()[:2]!r:.200}")


def _mounted(target, *options):
    """Mount (``mount`` as root; a container may refuse) `options` on `target`; True when
    done."""
    return subprocess.run(["mount", *options, str(target)], capture_output=True).returncode == 0


def f_readonly_rerun():
    """A result made read-only, then run and report again: the folder and its files
    immutable (``chattr +i``: permissions do not stop root, who runs this probe; EPERM),
    and the result's parent on a read-only bind mount (EROFS)."""
    for how in ("immutable (chattr +i)", "on a read-only mount"):
        parent = W / "ro_parent"
        shutil.rmtree(parent, ignore_errors=True)
        parent.mkdir()
        folder = parent / "ro"
        shutil.copytree(W / "r0", folder)
        before = table_digests(folder)
        paths = [folder, *folder.iterdir()]
        if how.startswith("immutable"):
            locked = subprocess.run(["chattr", "+i", *map(str, paths)]).returncode == 0
        else:
            locked = _mounted(parent, "--bind", str(parent)) and _mounted(
                parent, "-o", "remount,bind,ro")
        try:
            done = fp("run", "seed1.toml", "--out", folder, "--quiet")
            rep = fp("report", "--quiet", folder)
        finally:
            if how.startswith("immutable"):
                subprocess.run(["chattr", "-i", *map(str, paths)])
            else:
                subprocess.run(["umount", str(parent)])
        record(f"a result folder {how}, then run and report again",
               locked and one_line(done) and one_line(rep) and table_digests(folder) == before
               and ("chattr" in done.stderr and "chmod" not in done.stderr
                    if how.startswith("immutable") else "read-only" in done.stderr)
               and not leftovers(parent)
               and verify(folder, "--input", W / "b" / "tower.csv").returncode == 0,
               f"locked {locked}, run {done.returncode} {_stderr_tail(done, 110)}, report "
               f"{rep.returncode} {_stderr_tail(rep, 110)}, left {leftovers(parent)}")


def f_disk_full():
    """A real full disk (ENOSPC): the result's parent a tmpfs of 300 kB, too small for
    the tables (run) and for the report (report), and the CSV export's."""
    parent = W / "full"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    if not _mounted(parent, "-t", "tmpfs", "-o", "size=300k", "tmpfs"):
        record("a full disk (tmpfs)", False, "mount refused: not probed")
        return
    try:
        small = parent / "small"
        shutil.copytree(W / "r0", small, ignore=shutil.ignore_patterns(
            "timeseries.parquet", "annual.parquet"))      # a result that fits, as if
        before = table_digests(small)
        cases = {"run": ["run", "site.toml", "--out", parent / "new", "--quiet"],
                 "run replacing a result": ["run", "site.toml", "--out", small, "--quiet"],
                 "export": ["export", "--csv", parent / "csv", W / "r0"]}
        for label, args in cases.items():
            done = fp(*args)
            record(f"a full disk (ENOSPC, a 300 kB tmpfs) during {label}", one_line(done)
                   and table_digests(small) == before and not (parent / "new").exists()
                   and not (parent / "csv").exists() and not leftovers(parent),
                   f"exit {done.returncode}, stderr {_stderr_tail(done)}, left "
                   f"{leftovers(parent)}, free {shutil.disk_usage(parent).free}")
    finally:
        subprocess.run(["umount", str(parent)])


def f_locale_bytes():
    """A locale writing decimal commas (de_DE.UTF-8 compiled with localedef into a
    scratch LOCPATH), and a time zone name the system does not know: tables and the CSV
    export byte-identical to those under the C locale."""
    loc = W / "locales"
    if not (loc / "de_DE.UTF-8").exists():
        loc.mkdir(exist_ok=True)
        subprocess.run(["localedef", "-i", "de_DE", "-f", "UTF-8", str(loc / "de_DE.UTF-8")],
                       capture_output=True)
    base_csv = W / "loc_csv_c"
    shutil.rmtree(base_csv, ignore_errors=True)
    fp("export", "--csv", base_csv, W / "r0")
    cases = {"LC_ALL=de_DE.UTF-8 (decimal comma)": dict(LOCPATH=str(loc),
                                                        LC_ALL="de_DE.UTF-8"),
             "TZ=Mars/Olympus_Mons (a zone name the system does not know)":
                 dict(TZ="Mars/Olympus_Mons")}
    for number, (label, extra) in enumerate(cases.items()):
        env = dict(ENV, **extra)
        out, csv = W / f"loc{number}", W / f"loc{number}_csv"
        shutil.rmtree(out, ignore_errors=True)
        shutil.rmtree(csv, ignore_errors=True)
        done = fp("run", "site.toml", "--out", out, "--quiet", env=env)
        exp = fp("export", "--csv", csv, out, env=env)
        same = table_digests(out) == table_digests(W / "r0")
        csv_same = ({p.name: p.read_bytes() for p in csv.glob("*")} ==
                    {p.name: p.read_bytes() for p in base_csv.glob("*")}) if csv.exists() \
            else False
        record(f"run and CSV export under {label}: byte-identical", done.returncode == 0
               and exp.returncode == 0 and same and csv_same,
               f"exits {done.returncode}/{exp.returncode}, tables {same}, CSV {csv_same}")


def f_future_mtimes():
    """The clock set years ahead then back: the input, the config and every file of the
    result dated 2100; run again, report and verify."""
    bundle = _bundle("future")
    folder = fresh("future_out")
    ahead = 4102444800          # 2100-01-01 UTC
    for path in [bundle / "tower.csv", bundle / "site.toml", folder, *folder.iterdir()]:
        os.utime(path, (ahead, ahead))
    steps = [verify(folder), fp("report", "--quiet", folder, cwd=bundle),
             fp("run", "site.toml", "--out", folder, "--quiet", cwd=bundle)]
    record("input, config and result dated 2100 (a clock set ahead), then verify, report, run",
           all(s.returncode == 0 for s in steps) and table_digests(folder) ==
           table_digests(W / "r0") and not leftovers(W),
           f"exits {[s.returncode for s in steps]}, {[e for s in steps for e in errlines(s)]}")


def f_huge_line():
    """A line of 100 MB without a newline in the input (a logger's buffer dumped)."""
    import resource
    bundle = _bundle("huge")
    lines = (bundle / "tower.csv").read_bytes().splitlines(keepends=True)
    with open(bundle / "tower.csv", "wb") as handle:
        handle.writelines(lines[:200])
        handle.write(b"9" * (100 << 20))
        handle.write(b"\n")
        handle.writelines(lines[200:])
    out = W / "huge_out"
    shutil.rmtree(out, ignore_errors=True)
    began = time.time()
    done = limited({resource.RLIMIT_AS: 2500 << 20}, "run", "site.toml", "--out", out,
                   "--quiet", cwd=bundle)
    took = time.time() - began
    record("a 100 MB line without a newline in the input", one_line(done) and not out.exists()
           and took < 60, f"exit {done.returncode} in {took:.0f} s, stderr {_stderr_tail(done)}")


def f_quotes_path():
    parent = W / """it's "quoted" $HOME `x` ; & a\\b"""
    shutil.rmtree(parent, ignore_errors=True)
    shutil.copytree(W / "b", parent)
    (parent / "site's \"cfg\".toml").write_text((W / "b" / "site.toml").read_text())
    out = parent / """out 'a' "b" $(x)"""
    twin = parent / "twin \"t\""
    shutil.rmtree(twin, ignore_errors=True)
    steps = [fp("run", "site's \"cfg\".toml", "--out", out, "--quiet", cwd=parent),
             fp("run", "site's \"cfg\".toml", "--out", twin, "--quiet", cwd=parent),
             verify(out), fp("report", "--quiet", out), fp("diff", out, twin),
             fp("export", "--csv", parent / "csv 'q'", out)]
    record("config, input and result on paths with spaces, quotes, $, backticks, ; and \\",
           all(s.returncode == 0 for s in steps) and table_digests(out) ==
           table_digests(W / "r0") and not leftovers(parent),
           f"exits {[s.returncode for s in steps]}, {[e for s in steps for e in errlines(s)]}")


def f_input_replaced_by_rename():
    """The input replaced by a rename (a sync tool's new copy moved over it) and one cut
    mid-row (truncate), each while run reads it."""
    for how in ("renamed", "cut mid-row"):
        bundle = _bundle("rn")
        out = W / "rn_out"
        shutil.rmtree(out, ignore_errors=True)
        data = (bundle / "tower.csv").read_bytes()
        proc = start("run", "site.toml", "--out", out, "--quiet", cwd=bundle)
        time.sleep(0.25)
        if how == "renamed":
            (bundle / "new.csv").write_bytes(data.replace(b",", b";"))
            os.replace(bundle / "new.csv", bundle / "tower.csv")
        else:
            os.truncate(bundle / "tower.csv", len(data) // 2 + 7)
        _, err = proc.communicate(timeout=120)
        done = subprocess.CompletedProcess([], proc.returncode, "", err)
        fine = (one_line(done) and not out.exists()) or (
            proc.returncode == 0 and verify(out).returncode in (0, 1) and
            table_digests(out) == table_digests(W / "r0"))
        record(f"the input {how} while run reads it", fine and not leftovers(W),
               f"exit {proc.returncode}, stderr {err.strip()[-120:]!r}")


def f_batch_killed_rerun():
    """SIGKILL to every process of a Dask batch (a job killed by its scheduler's hard
    limit) with some sites finished, then the batch run again."""
    proc = batch_with_a_site_written()
    os.killpg(proc.pid, signal.SIGKILL)
    proc.communicate(timeout=60)
    time.sleep(1)
    rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
    codes = sites_verify(NET / "out")
    again = {p.name: table_digests(p) for p in sorted((NET / "out").iterdir()) if p.is_dir()}
    clean = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
    record("kill -9 of a whole Dask batch, then the batch run again", rerun.returncode == 0
           and codes == [0] * 4 and not leftovers(NET / "out") and clean.returncode == 0
           and again == {p.name: table_digests(p) for p in sorted((NET / "out").iterdir())
                         if p.is_dir()},
           f"rerun {rerun.returncode} {errlines(rerun)[:1]}, verify {codes}, left "
           f"{leftovers(NET / 'out')}")


def f_batch_full_disk():
    """A batch whose out folder is a tmpfs of 700 kB (room for one site), then the space
    freed (the tmpfs remounted larger) and the batch run again: failures.parquet records
    the failed sites with kind 'output' (faults37), and the rerun processes only the
    sites that were missing (the whole site's manifest untouched)."""
    import pandas as pd
    make_net()
    out = NET / "out"
    out.mkdir()
    if not _mounted(out, "-t", "tmpfs", "-o", "size=700k", "tmpfs"):
        record("a batch into a full disk", False, "mount refused: not probed")
        return
    try:
        done = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
        codes = sites_verify(out)
        left = leftovers(out)
        whole = sorted(p.name for p in out.iterdir() if (p / "manifest.json").is_file())
        kinds = (sorted(set(pd.read_parquet(out / "failures.parquet")["kind"]))
                 if (out / "failures.parquet").is_file() else [])
        _mounted(out, "-o", "remount,size=20m")
        stamps = {n: (out / n / "manifest.json").stat().st_mtime_ns for n in whole}
        rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
        kept = all((out / n / "manifest.json").stat().st_mtime_ns == t
                   for n, t in stamps.items())
        after = sites_verify(out)
    finally:
        subprocess.run(["umount", str(out)])
    record("a batch into a disk that fills (700 kB tmpfs), then space freed and rerun",
           one_line(done) and all(c == 0 for c in codes) and not left and kinds == ["output"]
           and 0 < len(whole) < 4 and kept and rerun.returncode == 0 and after == [0] * 4,
           f"exit {done.returncode} {errlines(done)[:1]!r:.150}, {len(codes)} sites whole, "
           f"kinds {kinds}, left {left}, rerun {rerun.returncode} "
           f"{rerun.stdout.splitlines()[:1]!r:.100}, whole kept {kept}, verify {after}")


def f_batch_open_files():
    """A batch under ``ulimit -n 24``: too few descriptors for the local Dask cluster."""
    import resource
    make_net()
    done = limited({resource.RLIMIT_NOFILE: 24}, "batch", "sites.toml", "--quiet",
                   "--workers", "2", cwd=NET)
    written = sites_verify(NET / "out") if (NET / "out").exists() else []
    record("a Dask batch under ulimit -n 24", (one_line(done) or done.returncode == 0)
           and all(c == 0 for c in written) and not leftovers(NET / "out")
           if (NET / "out").exists() else one_line(done),
           f"exit {done.returncode}, stderr {_stderr_tail(done)}, sites {written}")


def f_hard_linked_copy():
    """A result copied with hard links (``cp -al``, a snapshot tool's backup), then run
    again into the copy: the original keeps its bytes."""
    original = fresh("hl_orig")
    before = table_digests(original)
    copy = W / "hl_copy"
    shutil.rmtree(copy, ignore_errors=True)
    subprocess.run(["cp", "-al", str(original), str(copy)], check=True)
    done = fp("run", "seed1.toml", "--out", copy, "--quiet")
    record("a result copied with hard links (cp -al), then run again into the copy",
           done.returncode == 0 and table_digests(original) == before
           and verify(original).returncode == 0 and table_digests(copy) ==
           table_digests(W / "r1"), f"exit {done.returncode}, original intact "
           f"{table_digests(original) == before}")


def f_report_folder_link():
    """The result's ``report`` a symbolic link to a folder of the user's (a thesis draft):
    report and run again; the folder the link leads to keeps its files."""
    folder = fresh("rlink")
    own = W / "rlink_thesis"
    shutil.rmtree(own, ignore_errors=True)
    own.mkdir()
    (own / "chapter3.tex").write_text("draft\n")
    (folder / "report").symlink_to(own)
    rep = fp("report", "--quiet", folder)
    run = fp("run", "site.toml", "--out", folder, "--quiet")
    record("the result's report folder a link to a user's folder, then report and run",
           (one_line(rep) or rep.returncode == 0) and run.returncode == 0
           and sorted(p.name for p in own.iterdir()) == ["chapter3.tex"]
           and verify(folder).returncode == 0,
           f"report {rep.returncode} {_stderr_tail(rep, 100)}, run {run.returncode}, "
           f"user's folder {sorted(p.name for p in own.iterdir())}")


def f_compressed_input_damaged():
    """A gzip, bzip2 or xz input cut in half (a copy stopped) or with two bytes flipped."""
    import bz2
    import gzip
    import lzma
    bundle = _bundle("cz")
    data = (bundle / "tower.csv").read_bytes()
    seen = []
    for suffix, compress in (("gz", gzip.compress), ("bz2", bz2.compress),
                             ("xz", lzma.compress)):
        packed = compress(data)
        flipped = bytearray(packed)
        flipped[len(packed) // 2] ^= 0xFF
        flipped[len(packed) // 2 + 1] ^= 0x55
        for how, content in (("cut", packed[: len(packed) // 2]), ("flipped", bytes(flipped))):
            name = f"{how}.csv.{suffix}"
            (bundle / name).write_bytes(content)
            (bundle / f"{how}_{suffix}.toml").write_text(
                (bundle / "site.toml").read_text().replace("tower.csv", name))
            out = W / "cz_out"
            shutil.rmtree(out, ignore_errors=True)
            done = fp("run", f"{how}_{suffix}.toml", "--out", out, "--quiet", cwd=bundle)
            seen.append((name, done.returncode, one_line(done) and name in done.stderr
                         and not out.exists()))
    record("a compressed input (gzip, bzip2, xz) cut in half or with bytes flipped",
           all(s[2] for s in seen), f"{seen}")


def f_stack_limit():
    """A small stack (``ulimit -s`` 128 and 256 KiB; threads' stacks follow it): run and
    verify complete with the same bytes, or stop with one line. (At 64 KiB the
    interpreter itself crashes before any code runs: ``python -c pass`` exits 139.)"""
    import resource
    seen = []
    for kib in (128, 256):
        out = W / "stack"
        shutil.rmtree(out, ignore_errors=True)
        done = limited({resource.RLIMIT_STACK: kib << 10}, "run", "site.toml", "--out", out,
                       "--quiet")
        checked = limited({resource.RLIMIT_STACK: kib << 10}, "verify", "--quiet", out)
        fine = ((done.returncode == 0 and table_digests(out) == table_digests(W / "r0")
                 and checked.returncode == 0) or one_line(done))
        seen.append((kib, done.returncode, checked.returncode, fine))
    record("a small stack (ulimit -s 128 and 256 KiB) during run and verify",
           all(s[3] for s in seen) and not leftovers(W), f"{seen}")


# ------------------------------------------------------------------ round faults37
def f_path_control_characters():
    """A result folder whose name holds a line break and a tab: run, verify, report,
    export (NetCDF and CSV) and diff show it ``repr``-quoted, one line per item; the raw
    name never reaches standard output or the error line."""
    odd = W / "p\nq\tr"
    shutil.rmtree(odd, ignore_errors=True)
    done = [fp("run", "site.toml", "--out", odd, "--quiet"),
            fp("verify", "--quiet", odd), fp("report", "--quiet", odd),
            fp("export", "--netcdf", W / "p\nq.nc", odd),
            fp("export", "--csv", W / "p\nq csv", odd), fp("diff", odd, odd)]
    raw = [i for i, d in enumerate(done) if str(odd) in d.stdout + d.stderr]
    codes = [d.returncode for d in done]
    shown = [repr(str(odd))[:-1] in d.stdout for d in (done[0], done[1], done[5])]
    record("a result folder name with a line break and a tab in every command's output",
           not raw and codes == [0] * 6 and all(shown),
           f"exits {codes}, commands printing the raw name {raw}, quoted {shown}")
    shutil.rmtree(odd, ignore_errors=True)
    shutil.rmtree(W / "p\nq csv", ignore_errors=True)
    (W / "p\nq.nc").unlink(missing_ok=True)


def f_report_memory_line():
    """``report`` under ``ulimit -v`` 290 to 330 MB (where matplotlib's compiled
    libraries cannot be mapped): one line about memory, no reinstall hint."""
    import resource
    seen = []
    for mb in (290, 300, 310, 320, 330):
        folder = fresh("mem_rep")
        done = limited({resource.RLIMIT_AS: mb << 20}, "report", "--quiet", folder)
        text = " ".join(errlines(done))
        seen.append((mb, done.returncode, done.returncode == 0 or (
            one_line(done) and "memory" in text and "reinstall" not in text
            and not (folder / "report").exists())))
    record("report under ulimit -v 290-330 MB: memory only, no reinstall hint",
           all(s[2] for s in seen) and not leftovers(W), f"{seen}")


def f_run_quiet_promise():
    """``run --quiet``: what the help and the README promise (the progress display only)
    is what it does; the tables still print."""
    out = W / "quiet"
    shutil.rmtree(out, ignore_errors=True)
    done = fp("run", "site.toml", "--out", out, "--quiet")
    helped = fp("run", "--help").stdout
    readme = (TREE / "README.md").read_text()
    promise = "tables" in helped.split("--quiet", 2)[-1] and "only the progress" in readme
    record("run --quiet does what --help and the README say",
           done.returncode == 0 and "\r" not in done.stderr and promise,
           f"stderr {done.stderr.count(chr(13))} carriage returns, stdout "
           f"{len(done.stdout.splitlines())} lines, help/README say tables still print: "
           f"{promise}")


def f_stop_netcdf_and_report():
    """SIGTERM and SIGINT during ``export --netcdf`` and ``report``, sent once the
    temporary file or staging folder appears: one line, exit 128 + signal, nothing
    half-written."""
    for signum in (signal.SIGTERM, signal.SIGINT):
        for command in ("export", "report"):
            folder = fresh("stop_" + command)
            target = W / "stop.nc"
            target.unlink(missing_ok=True)
            if command == "export":
                args = ["export", "--netcdf", target, folder]
                appeared = lambda: _entries(W, ".stop.nc.")          # noqa: E731
            else:
                args = ["report", "--quiet", folder]
                appeared = lambda folder=folder: _entries(  # noqa: E731
                    folder, ".report.staging-")
            done = stop_when(args, signum, appeared)
            left = leftovers(W) + leftovers(folder)
            whole = (not target.exists() and not (folder / "report").exists()) or \
                done.returncode == 0
            record(f"{signal.Signals(signum).name} during {command}"
                   + (" --netcdf" if command == "export" else ""),
                   one_line(done, 128 + signum) and not left and whole
                   or (done.returncode == 0 and not left),
                   f"exit {done.returncode}, {errlines(done)[:1]!r:.140}, left {left}")
            for stale in leftovers(W) + leftovers(folder):
                path = W / stale if (W / stale).exists() else folder / stale
                shutil.rmtree(path, ignore_errors=True) if path.is_dir() else path.unlink()
            target.unlink(missing_ok=True)


def f_table_of_other_run_why():
    """A valid manifest with one table replaced by another run's copy: verify names the
    table and why (its checksum is not the manifest's)."""
    folder = fresh("t_why")
    shutil.copy2(W / "r1" / "annual.parquet", folder / "annual.parquet")
    done = verify(folder)
    first = done.stdout.splitlines()[0] if done.stdout else ""
    record("one table replaced by another run's copy: verify names it and why",
           done.returncode == 1 and "annual.parquet" in first
           and any(w in first for w in ("SHA-256", "checksum", "changed")),
           f"exit {done.returncode}; {first[:200]!r}")


def f_diff_older_release():
    """``diff`` between a folder written by release 0.30.0 (commit 605729f, its final
    code, unpacked with git archive) and one written now: differences of the writer are
    named as metadata, not as numbers."""
    base = W / "rel0300"
    if not (base / "fluxpart").is_dir():
        base.mkdir(parents=True, exist_ok=True)     # the release's files, no worktree
        files = subprocess.run(["git", "-C", str(TREE), "archive", "605729f"],
                               capture_output=True)
        made = subprocess.run(["tar", "-x", "-C", str(base)], input=files.stdout,
                              capture_output=True) if files.returncode == 0 else files
        if made.returncode != 0:
            record("diff of a 0.30.0 folder and a new one", False,
                   f"0.30.0 not unpacked: {made.stderr.strip()[:120]!r}")
            return
    out = W / "r_old"
    shutil.rmtree(out, ignore_errors=True)
    old = fp("run", "site.toml", "--out", out, "--quiet", env=dict(ENV, PYTHONPATH=str(base)))
    done = fp("diff", out, W / "r0")
    tables = [line.strip() for line in done.stdout.splitlines()
              if line.strip().startswith("table ")]
    record("diff of a 0.30.0-written folder and a new one: metadata named as such",
           old.returncode == 0 and done.returncode in (0, 1) and "How the annual" not in
           done.stdout and all("metadata only" in t or "file only" in t for t in tables),
           f"old run {old.returncode}, diff {done.returncode}: "
           f"{[t.split('  first')[0] for t in tables]!r:.260}")


def f_input_unmounted_lazily():
    """The input on a file system unmounted lazily (``umount -l``, as a network share
    that goes away) while run reads it (the process stopped with SIGSTOP the moment it
    holds the file open, the share unmounted, the process continued): the run completes
    from the open file or stops with one line naming the input; nothing half-written."""
    share = W / "share"
    share.mkdir(exist_ok=True)
    if not _mounted(share, "-t", "tmpfs", "-o", "size=50m", "tmpfs"):
        record("the input's file system unmounted while read", False, "mount refused")
        return
    example = TREE / "examples" / "quillmoor_grassland"       # a whole year, 1 MB
    shutil.copy2(example.with_suffix(".csv"), share / "tower.csv")
    config = W / "b" / "share.toml"
    config.write_text(example.with_suffix(".toml").read_text().replace(
        "quillmoor_grassland.csv", str(share / "tower.csv")))
    out = W / "u_out"
    shutil.rmtree(out, ignore_errors=True)
    proc = start("run", config, "--out", out, "--quiet")
    pid_fd = Path(f"/proc/{proc.pid}/fd")
    deadline = time.time() + 60
    held = False
    while proc.poll() is None and time.time() < deadline:
        try:
            held = any(str(share) in os.readlink(f) for f in pid_fd.iterdir())
        except OSError:
            held = False
        if held:
            proc.send_signal(signal.SIGSTOP)     # held still while its share goes away
            break
    gone = subprocess.run(["umount", "-l", str(share)], capture_output=True).returncode == 0
    proc.send_signal(signal.SIGCONT)
    stdout, stderr = proc.communicate(timeout=120)
    done = subprocess.CompletedProcess([], proc.returncode, stdout, stderr)
    good = (verify(out, "--input", example.with_suffix(".csv")).returncode
            if out.exists() else None)
    record("the input's file system unmounted lazily while read (umount -l)",
           gone and ((done.returncode == 0 and good == 0) or (one_line(done)
                                                             and not out.exists()))
           and not leftovers(W),
           f"held open when unmounted {held}, exit {done.returncode} "
           f"{errlines(done)[:1]!r:.160}, verify after {good}")
    if subprocess.run(["mountpoint", "-q", str(share)]).returncode == 0:
        subprocess.run(["umount", str(share)])


# ------------------------------------------------------------------ round faults38
def _same_report(folder, base):
    """The report page (its folder name aside) and figures of `folder` equal `base`'s."""
    def files(f):
        return {q.name: q.read_bytes().replace(
            b"<code>" + Path(f).name.encode() + b"<", b"<code>F<") if q.suffix == ".html"
                else q.read_bytes() for q in sorted((Path(f) / "report").iterdir())}
    return (Path(folder) / "report").is_dir() and files(folder) == files(base)


def _report_base():
    base = W / "rep_base"
    if not (base / "report").is_dir():
        fresh("rep_base")
        fp("report", "--quiet", base)
    return base


def f_run_while_verify():
    """Three verifies of a folder while run replaces it with another seed's result."""
    folder = fresh("rwv")
    proc = start("run", "seed1.toml", "--out", folder, "--quiet")
    checks = []
    while proc.poll() is None:
        checks.append(verify(folder))
    proc.communicate(timeout=120)
    checks.append(verify(folder))
    codes = [c.returncode for c in checks]
    tb = any("Traceback" in c.stderr for c in checks)
    record("verify again and again while run replaces the folder with another seed's",
           proc.returncode == 0 and set(codes) == {0} and not tb and not leftovers(W)
           and table_digests(folder) == table_digests(W / "r1"),
           f"run {proc.returncode}, verify exits {codes}, traceback {tb}")


def f_out_odd_parents():
    """``--out`` below a dangling symbolic link, below a regular file, and a device node
    (mknod c 1 3, the null device's numbers, made in the scratch folder)."""
    dangling = linked("dangl", W / "nowhere")
    plain = W / "pfile"
    plain.write_text("not a folder\n")
    node = W / "nulldev"
    node.unlink(missing_ok=True)
    made = subprocess.run(["mknod", str(node), "c", "1", "3"]).returncode == 0
    for label, out in (("below a dangling symbolic link", dangling / "out"),
                       ("below a regular file", plain / "out"),
                       ("a character device node", node)):
        if out == node and not made:
            record(f"run --out {label}", False, "mknod refused: not probed")
            continue
        done = fp("run", "site.toml", "--out", out, "--quiet")
        kept = (node.is_char_device() if out == node else
                plain.read_text() == "not a folder\n" and not (W / "nowhere").exists())
        record(f"run --out {label}", (one_line(done) or (
            done.returncode == 0 and verify(out).returncode == 0)) and kept
            and not leftovers(W), f"exit {done.returncode}, {_stderr_tail(done, 170)}, "
            f"kept {kept}, left {leftovers(W)}")


def _shell(command, env=None, cwd=None):
    return subprocess.run(["bash", "-c", command], env=env or ENV, cwd=cwd or W / "b",
                          capture_output=True, text=True, timeout=300)


def f_closed_streams():
    """A reader that closes at once (``| true``), standard output closed (``>&-``),
    standard input closed (``<&-``), standard output full (``> /dev/full``)."""
    fresh("cs")
    run = f"{PY} -m fluxpart run site.toml --out {W / 'cs_run'}"
    shutil.rmtree(W / "cs_run", ignore_errors=True)
    cases = [("run | (a reader closing at once)", f"{run} | true; echo ${{PIPESTATUS[0]}} >&2", 0),
             ("check | (closing at once)", f"{PY} -m fluxpart check site.toml | true; "
              "echo ${PIPESTATUS[0]} >&2", None),
             ("verify >&-", f"{PY} -m fluxpart verify {W / 'cs'} >&-; echo $? >&2", 0),
             ("report <&-", f"{PY} -m fluxpart report --quiet {W / 'cs'} <&-; echo $? >&2", 0),
             ("export --csv <&- >&-", f"{PY} -m fluxpart export --csv {W / 'cs_csv'} "
              f"{W / 'cs'} <&- >&-; echo $? >&2", 0),
             ("verify > /dev/full", f"{PY} -m fluxpart verify {W / 'cs'} > /dev/full; "
              "echo $? >&2", 2)]
    shutil.rmtree(W / "cs_csv", ignore_errors=True)
    for label, command, want in cases:
        done = _shell(command)
        lines = done.stderr.strip().splitlines()
        code = int(lines[-1]) if lines and lines[-1].isdigit() else None
        tb = "Traceback" in done.stderr or "Exception ignored" in done.stderr
        good = (code == want) if want is not None else code in (0, 1)
        record(f"standard streams: {label}", good and not tb and not leftovers(W),
               f"exit {code}, traceback {tb}, {lines[:-1][-1:]!r:.140}")
    record("standard streams: the result of run | true verifies",
           verify(W / "cs_run").returncode == 0, "")


def _localedef(name, charmap, source):
    loc = W / "locales"
    loc.mkdir(exist_ok=True)
    if not (loc / name).exists():
        subprocess.run(["localedef", "-i", source, "-f", charmap, str(loc / name)],
                       capture_output=True)
    return loc


def f_locales_non_ascii():
    """A site named with letters beyond ASCII, its bundle and result on such paths, run
    under ``LC_ALL=C`` (Python's UTF-8 mode), ``LC_ALL=C PYTHONUTF8=0`` (ASCII) and a
    Latin-1 locale (de_DE.ISO-8859-1 from localedef); each result then verified and
    reported under C.UTF-8: tables byte-identical to the UTF-8 run's."""
    bundle = W / "Ørsted Mühle 草原"
    shutil.rmtree(bundle, ignore_errors=True)
    shutil.copytree(W / "b", bundle)
    (bundle / "site.toml").write_text((W / "b" / "site.toml").read_text().replace(
        "Quillmoor grassland (fictional)", "Quillmoor Ærø-Mühle 草原 (fictional)"))
    loc = _localedef("de_DE.ISO-8859-1", "ISO-8859-1", "de_DE")
    envs = {"C.UTF-8": dict(LC_ALL="C.UTF-8"), "LC_ALL=C": dict(LC_ALL="C"),
            "LC_ALL=C PYTHONUTF8=0": dict(LC_ALL="C", PYTHONUTF8="0"),
            "LC_ALL=de_DE.ISO-8859-1 (Latin-1)": dict(LC_ALL="de_DE.ISO-8859-1",
                                                       LOCPATH=str(loc), PYTHONUTF8="0")}
    base = None
    for number, (label, extra) in enumerate(envs.items()):
        out = bundle / f"Ergebnis ü {number}"
        shutil.rmtree(out, ignore_errors=True)
        done = fp("run", "site.toml", "--out", out, "--quiet", cwd=bundle,
                  env=dict(ENV, **extra))
        digests = table_digests(out) if out.exists() else None
        base = base or digests
        checked = verify(out, env=dict(ENV, LC_ALL="C.UTF-8"))
        rep = fp("report", "--quiet", out, env=dict(ENV, LC_ALL="C.UTF-8"))
        tb = "Traceback" in done.stderr + checked.stderr
        record(f"a non-ASCII site and paths run under {label}, verified under C.UTF-8",
               done.returncode == 0 and digests == base and checked.returncode == 0
               and rep.returncode == 0 and not tb,
               f"run {done.returncode} {errlines(done)[:1]!r:.120}, same tables "
               f"{digests == base}, verify {checked.returncode} "
               f"{(checked.stdout + checked.stderr).strip().splitlines()[-1:]!r:.160}, "
               f"report {rep.returncode}")


def f_report_locale_tz():
    """``report`` and the CSV export under a decimal-comma locale (LANG and LC_NUMERIC
    de_DE.UTF-8) and the farthest zones (UTC+14, UTC-12): page, figures and CSV
    byte-identical to those under C.UTF-8."""
    base = _report_base()
    loc = _localedef("de_DE.UTF-8", "UTF-8", "de_DE")
    base_csv = W / "rl_csv_base"
    if not base_csv.exists():
        fp("export", "--csv", base_csv, W / "r0")
    for label, extra in (("LANG=de_DE.UTF-8 LC_NUMERIC=de_DE.UTF-8",
                          dict(LANG="de_DE.UTF-8", LC_NUMERIC="de_DE.UTF-8",
                               LOCPATH=str(loc))),
                         ("TZ=Etc/GMT-14", dict(TZ="Etc/GMT-14")),
                         ("TZ=Etc/GMT+12", dict(TZ="Etc/GMT+12"))):
        env = dict(ENV, **extra)
        env.pop("LC_ALL", None)
        folder = fresh("rep_loc")
        csv = W / "rl_csv"
        shutil.rmtree(csv, ignore_errors=True)
        rep = fp("report", "--quiet", folder, env=env)
        exp = fp("export", "--csv", csv, W / "r0", env=env)
        same_csv = csv.exists() and {p.name: p.read_bytes() for p in csv.iterdir()} == \
            {p.name: p.read_bytes() for p in base_csv.iterdir()}
        record(f"report and CSV export under {label}: byte-identical",
               rep.returncode == 0 and exp.returncode == 0 and _same_report(folder, base)
               and same_csv, f"exits {rep.returncode}/{exp.returncode}, report same "
               f"{_same_report(folder, base)}, CSV same {same_csv}")


def f_matplotlib_config():
    """``report`` where matplotlib's configuration folder is a file, where a user's
    matplotlibrc asks for LaTeX text, an interactive backend, SVG and 300 dpi, and with
    ``HOME`` and the XDG folders missing: page and figures as under a clean setup, and
    nothing on standard error but ``warning:`` lines."""
    base = _report_base()
    rc = W / "mplrc"
    rc.mkdir(exist_ok=True)
    (rc / "matplotlibrc").write_text("text.usetex: True\nbackend: TkAgg\nfigure.dpi: 300\n"
                                     "savefig.format: svg\nfont.size: 22\n")
    plain = W / "mpl_a_file"
    plain.write_text("x\n")
    for label, extra in (("MPLCONFIGDIR a regular file", dict(MPLCONFIGDIR=str(plain))),
                         ("a matplotlibrc with usetex, TkAgg, SVG, 300 dpi",
                          dict(MPLCONFIGDIR=str(rc))),
                         ("HOME, XDG_CONFIG_HOME and XDG_CACHE_HOME missing",
                          dict(HOME="/nonexistent", XDG_CONFIG_HOME="/nonexistent/c",
                               XDG_CACHE_HOME="/nonexistent/k"))):
        folder = fresh("mplc")
        done = fp("report", "--quiet", folder, env=dict(ENV, **extra))
        noise = [line for line in done.stderr.splitlines() if not line.startswith("warning:")]
        record(f"report with {label}", done.returncode == 0 and not noise
               and _same_report(folder, base), f"exit {done.returncode}, same "
               f"{_same_report(folder, base)}, stderr {noise[:2]!r:.160}")


def _full_tmpfs(name):
    """A 64 kB tmpfs mounted at `name` in the scratch folder and filled to 60 kB; the path
    and whether the mount was allowed."""
    full = W / name
    full.mkdir(exist_ok=True)
    mounted = _mounted(full, "-t", "tmpfs", "-o", "size=64k", "tmpfs")
    if mounted:
        (full / "filler").write_bytes(b"\0" * (60 << 10))
    return full, mounted


def _four_commands(name, env):
    """run into a new folder, report, verify and export --netcdf of a fresh copy of a
    result, all under `env`: the copy and the four completed processes."""
    folder = fresh(name)
    out = W / f"{name}_run"
    shutil.rmtree(out, ignore_errors=True)
    (W / f"{name}.nc").unlink(missing_ok=True)
    return folder, [fp("run", "site.toml", "--out", out, "--quiet", env=env),
                    fp("report", "--quiet", folder, env=env),
                    fp("verify", "--quiet", folder, env=env),
                    fp("export", "--netcdf", W / f"{name}.nc", folder, env=env)]


def _under_tmpdirs(cases, name, batch=False):
    """For each ``(label, TMPDIR)`` (None: its mount was refused), :func:`_four_commands`
    and, with `batch`, a Dask batch: each completes or stops with one line, nothing left."""
    for label, tmp in cases:
        if tmp is None:
            record(f"TMPDIR {label}", False, "mount refused: not probed")
            continue
        env = dict(ENV, TMPDIR=str(tmp))
        folder, steps = _four_commands(name, env)
        if batch:
            make_net()
            steps.append(fp("batch", "sites.toml", "--quiet", cwd=NET, env=env))
        fine = [s.returncode == 0 or one_line(s) for s in steps]
        record(f"TMPDIR {label} under run, report, verify, export --netcdf"
               f"{', batch' if batch else ''}", all(fine) and not leftovers(W)
               and not leftovers(folder) and verify(folder).returncode == 0,
               f"exits {[s.returncode for s in steps]}, "
               f"{[e for s in steps for e in errlines(s)][:1]!r:.160}")


def f_tmpdir_odd():
    """``TMPDIR`` a dangling link, and on a full 64 kB tmpfs, under run, report, verify,
    export --netcdf: each completes or stops with one line; nothing left."""
    full, mounted = _full_tmpfs("tmpfull")
    try:
        _under_tmpdirs((("a dangling link", linked("tmpdangl", W / "tmp_nowhere")),
                        ("a full 64 kB tmpfs", full if mounted else None)), "tmpd")
    finally:
        if mounted:
            subprocess.run(["umount", str(full)])


def f_umasks():
    """``umask 077`` and ``umask 777`` (as root, who still reads a mode-000 file) under
    run: the result's modes follow the mask, the tables are byte-identical and verify."""
    seen = []
    for mask in (0o077, 0o777):
        out = W / f"umask{mask:o}"
        shutil.rmtree(out, ignore_errors=True)
        done = subprocess.run([PY, "-m", "fluxpart", "run", "site.toml", "--out", str(out),
                               "--quiet"], env=ENV, cwd=W / "b", capture_output=True,
                              text=True, preexec_fn=lambda m=mask: os.umask(m))
        modes = sorted({oct(p.stat().st_mode & 0o777) for p in out.glob("*.parquet")}) \
            if out.exists() else []
        fine = (done.returncode == 0 and table_digests(out) == table_digests(W / "r0")
                and verify(out).returncode == 0 and modes == [oct(0o666 & ~mask)]) or \
            (one_line(done) and not out.exists())
        seen.append((oct(mask), done.returncode, modes, fine, done.stderr.strip()[-80:]))
        os.chmod(out, 0o755) if out.exists() else None
    record("run under umask 077 and 777", all(s[3] for s in seen) and not leftovers(W),
           f"{seen}")


def f_long_paths():
    """A result 300 characters deep (run, verify, report, export) and one beyond the
    system's PATH_MAX (4096 bytes, limits.h (m)): written, or one line."""
    deep = W
    for number in range(3):
        deep = deep / (f"d{number}" + "x" * 95)
    deep.mkdir(parents=True, exist_ok=True)
    out = deep / "out"
    shutil.rmtree(out, ignore_errors=True)
    steps = [fp("run", "site.toml", "--out", out, "--quiet"), verify(out),
             fp("report", "--quiet", out), fp("export", "--csv", deep / "csv", out)]
    record(f"a result folder {len(str(out))} characters deep",
           all(s.returncode == 0 for s in steps) and table_digests(out) ==
           table_digests(W / "r0"), f"exits {[s.returncode for s in steps]}")
    far = W / "far"
    shutil.rmtree(far, ignore_errors=True)
    path = far
    while len(str(path)) < 4200:
        path = path / ("y" * 200)
    done = fp("run", "site.toml", "--out", path, "--quiet")
    record(f"a result folder {len(str(path))} bytes deep (beyond PATH_MAX)",
           one_line(done) and not leftovers(W), f"exit {done.returncode}, "
           f"{_stderr_tail(done, 160)}")
    shutil.rmtree(far, ignore_errors=True)


def f_logger_appending():
    """A logger appending a record every 2 ms to the input while run reads it."""
    import threading
    bundle = _bundle("grow")
    out = W / "grow_out"
    shutil.rmtree(out, ignore_errors=True)
    last = (bundle / "tower.csv").read_bytes().splitlines(keepends=True)[-1]
    stop = threading.Event()

    def append():
        while not stop.is_set():
            with open(bundle / "tower.csv", "ab") as handle:
                handle.write(last)
            time.sleep(0.002)
    writer = threading.Thread(target=append)
    writer.start()
    try:
        done = fp("run", "site.toml", "--out", out, "--quiet", cwd=bundle)
    finally:
        stop.set()
        writer.join()
    record("a logger appending to the input while run reads it",
           (one_line(done) and "tower.csv" in done.stderr and not out.exists())
           or (done.returncode == 0 and verify(out).returncode in (0, 1)), f"exit "
           f"{done.returncode}, {_stderr_tail(done, 170)}, left {leftovers(W)}")


def f_input_replaced_after_check():
    """``check`` passes, then a value of the input is edited, then ``run``: the result is
    the edited file's, recorded by its hash; verify passes."""
    bundle = _bundle("chk")
    out = W / "chk_out"
    shutil.rmtree(out, ignore_errors=True)
    first = fp("check", "site.toml", cwd=bundle)
    lines = (bundle / "tower.csv").read_text().splitlines(keepends=True)
    row = lines[300].split(",")
    row[1] = "-3.25" if row[1] != "-3.25" else "-3.5"
    lines[300] = ",".join(row)
    (bundle / "tower.csv").write_text("".join(lines))
    done = fp("run", "site.toml", "--out", out, "--quiet", cwd=bundle)
    import json
    recorded = json.loads((out / "manifest.json").read_text())["provenance"]["input"] \
        if out.exists() else {}
    digest = hashlib.sha256((bundle / "tower.csv").read_bytes()).hexdigest()
    record("the input edited between check and run", first.returncode in (0, 1)
           and done.returncode == 0 and digest in json.dumps(recorded)
           and verify(out).returncode == 0, f"check {first.returncode}, run "
           f"{done.returncode}, the edited file's hash recorded {digest in json.dumps(recorded)}")


_CLOCK = """
import time
_offset = {when} - time.time()
_real, _real_ns = time.time, time.time_ns
time.time = lambda: _real() + _offset
time.time_ns = lambda: _real_ns() + int(_offset * 1e9)
"""


def f_clock_far():
    """The machine's clock at 1970-01-01 and at 2099-12-31 (``time.time`` patched through
    a ``sitecustomize`` in the child; faketime is not installed): run, verify, report,
    export; tables byte-identical, nothing left."""
    for label, when in (("1970-01-01", 3600), ("2099-12-31", 4102358400)):
        site = W / f"clock{when}"
        site.mkdir(exist_ok=True)
        (site / "sitecustomize.py").write_text(_CLOCK.format(when=when))
        env = dict(ENV, PYTHONPATH=f"{site}{os.pathsep}{TREE}")
        folder = fresh("clk")
        out = W / "clk_new"
        shutil.rmtree(out, ignore_errors=True)
        shutil.rmtree(W / "clk_csv", ignore_errors=True)
        steps = [fp("run", "seed1.toml", "--out", folder, "--quiet", env=env),
                 fp("run", "site.toml", "--out", out, "--quiet", env=env),
                 verify(out, env=env), fp("report", "--quiet", out, env=env),
                 fp("export", "--csv", W / "clk_csv", out, env=env), verify(out)]
        record(f"the clock at {label} under run, verify, report, export",
               all(s.returncode == 0 for s in steps) and table_digests(out) ==
               table_digests(W / "r0") and table_digests(folder) == table_digests(W / "r1")
               and not leftovers(W), f"exits {[s.returncode for s in steps]}, "
               f"{[e for s in steps for e in errlines(s)][:1]!r:.150}")


def f_cpu_limit():
    """``nice -n 19`` and a CPU-time limit of 2 s (soft; hard 30 s) under run replacing a
    result: one line (SIGXCPU, exit 152), the earlier result whole, nothing left."""
    import resource
    folder = fresh("cpu")
    before = table_digests(folder)

    def limit():
        os.nice(19)
        resource.setrlimit(resource.RLIMIT_CPU, (2, 30))
    done = subprocess.run([PY, "-m", "fluxpart", "run", "seed1.toml", "--out", str(folder),
                           "--quiet"], env=ENV, cwd=W / "b", capture_output=True, text=True,
                          preexec_fn=limit, timeout=300)
    record("nice 19 and ulimit -t 2 (soft) during run", (one_line(done, 152)
           and _intact(folder, before)) or (done.returncode == 0 and table_digests(folder)
                                            == table_digests(W / "r1"))
           and not leftovers(W), f"exit {done.returncode}, {_stderr_tail(done, 160)}")


def f_open_files_readers():
    """``ulimit -n 16`` under check, verify, report, export (CSV and NetCDF) and diff."""
    import resource
    folder = fresh("nof")
    shutil.rmtree(W / "nof_csv", ignore_errors=True)
    (W / "nof.nc").unlink(missing_ok=True)
    seen = []
    for args in (["check", "site.toml"], ["verify", "--quiet", folder],
                 ["report", "--quiet", folder], ["export", "--csv", W / "nof_csv", folder],
                 ["export", "--netcdf", W / "nof.nc", folder], ["diff", folder, W / "r1"]):
        done = limited({resource.RLIMIT_NOFILE: 16}, *args)
        seen.append((args[0], done.returncode, done.returncode in (0, 1) and
                     "Traceback" not in done.stderr or one_line(done)))
    record("ulimit -n 16 under check, verify, report, export, diff",
           all(s[2] for s in seen) and not leftovers(W) and not leftovers(folder), f"{seen}")


def f_data_limit():
    """A data-segment limit (``ulimit -d``, RLIMIT_DATA: since Linux 4.7 every private
    writable mapping counts) under run, verify, report and export --netcdf, and an
    address-space limit under export --netcdf."""
    import resource
    for command, sizes in (("run", (60, 100, 130, 150, 170, 200, 250)),
                           ("verify", (60, 100, 150, 200)), ("report", (60, 100, 150, 200)),
                           ("export", (150, 200, 235, 250))):
        seen = _limit_sweep(resource.RLIMIT_DATA, command, sizes, "seed1.toml", "dseg")
        record(f"a data-segment limit (ulimit -d {sizes[0]} .. {sizes[-1]} MB) during "
               f"{command}", all(s[2] for s in seen) and not leftovers(W), f"{seen}")
    seen = _limit_sweep(resource.RLIMIT_AS, "export", (450, 550, 650), "seed1.toml", "dseg")
    record("a memory limit (ulimit -v 450 .. 650 MB) during export --netcdf",
           all(s[2] for s in seen) and not leftovers(W), f"{seen}")
    seen = []
    for megabytes in (60, 70, 150):
        done = _limited_or_hung({resource.RLIMIT_DATA: megabytes << 20}, "check", "site.toml")
        seen.append((megabytes, done.returncode, done.returncode in (0, 1)
                     or (done.returncode == 2 and len(errlines(done)) == 1)))
    record("ulimit -d 60 .. 150 MB during check", all(s[2] for s in seen), f"{seen}")
    make_net()
    done = limited({resource.RLIMIT_DATA: 200 << 20}, "batch", "sites.toml", "--quiet",
                   "--workers", "1", cwd=NET, timeout=600)
    said = [line for line in done.stderr.splitlines() if not line.startswith("warning:")
            and line.strip()]
    record("a Dask batch under ulimit -d 200 MB: one line per failed site",
           done.returncode in (0, 1) and "Traceback" not in done.stderr
           and all(line.startswith("error:") for line in said), f"exit {done.returncode}, "
           f"{len(said)} lines, {said[:1]!r:.160}")


def f_signal_dispositions():
    """Signals as a caller leaves them: run under ``nohup`` (SIGHUP ignored) sent SIGHUP
    as it writes (completes), a batch with SIGCHLD ignored (a daemon's child), SIGTSTP
    then SIGCONT and SIGWINCH during run (completes, identical)."""
    folder = fresh("nohup")
    proc = subprocess.Popen([PY, "-m", "fluxpart", "run", "seed1.toml", "--out", str(folder),
                             "--quiet"], env=ENV, cwd=W / "b", stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True,
                            preexec_fn=lambda: signal.signal(signal.SIGHUP, signal.SIG_IGN))
    deadline = time.time() + 120
    while proc.poll() is None and time.time() < deadline and not _entries(W, ".nohup.staging-"):
        time.sleep(0.005)
    proc.send_signal(signal.SIGHUP)
    _, err = proc.communicate(timeout=120)
    record("run under nohup (SIGHUP ignored) sent SIGHUP while it writes",
           proc.returncode == 0 and table_digests(folder) == table_digests(W / "r1"),
           f"exit {proc.returncode}, {err.strip()[-120:]!r}")
    out = W / "tstp"
    shutil.rmtree(out, ignore_errors=True)
    proc = start("run", "site.toml", "--out", out, "--quiet")
    for signum in (signal.SIGTSTP, signal.SIGCONT, signal.SIGWINCH, signal.SIGSTOP,
                   signal.SIGCONT):
        time.sleep(0.4)
        if proc.poll() is None:
            proc.send_signal(signum)
    _, err = proc.communicate(timeout=120)
    record("SIGTSTP, SIGCONT, SIGWINCH, SIGSTOP, SIGCONT during run",
           proc.returncode == 0 and table_digests(out) == table_digests(W / "r0"),
           f"exit {proc.returncode}, {err.strip()[-120:]!r}")
    make_net()
    done = subprocess.run([PY, "-m", "fluxpart", "batch", "sites.toml", "--quiet",
                           "--workers", "2"], env=ENV, cwd=NET, capture_output=True,
                          text=True, timeout=600,
                          preexec_fn=lambda: signal.signal(signal.SIGCHLD, signal.SIG_IGN))
    codes = sites_verify(NET / "out") if (NET / "out").exists() else []
    record("a Dask batch started with SIGCHLD ignored", (done.returncode == 0 and
           codes == [0] * 4) or one_line(done), f"exit {done.returncode}, "
           f"{_stderr_tail(done, 160)}, verify {codes}")


def f_sigquit():
    """SIGQUIT (Ctrl-\\, a request for a core dump: not handled, by design) at 0.5 to
    1.5 s of a run replacing a result: the earlier or the new result whole, never a mix;
    the next run leaves nothing behind."""
    seen = []
    for offset in (0.5, 0.8, 1.1, 1.5):
        folder = fresh("quit")
        before = table_digests(folder)
        # its default action back (a shell's background job inherits it ignored)
        proc = subprocess.Popen(
            [PY, "-m", "fluxpart", "run", "seed1.toml", "--out", str(folder), "--quiet"],
            env=ENV, cwd=W / "b", stdout=subprocess.PIPE, stderr=subprocess.PIPE,
            preexec_fn=lambda: signal.signal(signal.SIGQUIT, signal.SIG_DFL))
        time.sleep(offset)
        proc.send_signal(signal.SIGQUIT)
        proc.communicate(timeout=120)
        whole = _intact(folder, before) or (table_digests(folder) == table_digests(W / "r1")
                                            and verify(folder).returncode == 0)
        again = fp("run", "site.toml", "--out", folder, "--quiet")
        seen.append((offset, proc.returncode, whole, again.returncode, leftovers(W)))
    record("SIGQUIT (Ctrl-\\) at 0.5-1.5 s of run, then run again",
           all(s[2] and s[3] == 0 and not s[4] for s in seen), f"{seen}")


def f_verify_saved_inside():
    """An auditor saving verify's report inside the result (``verify out >
    out/verify.txt``): the file is named as not the result's."""
    folder = fresh("vin")
    done = _shell(f"{PY} -m fluxpart verify {folder} > {folder / 'verify.txt'}; echo $? >&2")
    text = (folder / "verify.txt").read_text()
    code = done.stderr.strip().splitlines()[-1]
    record("verify's report saved inside the result folder (> out/verify.txt)",
           "verify.txt" in text and "Traceback" not in done.stderr,
           f"exit {code}, names verify.txt {'verify.txt' in text}")


def f_deleted_cwd():
    """run, verify and a Dask batch from a folder deleted while the shell was in it:
    absolute paths work, a relative one is one line naming the gone folder."""
    gone = W / "gone"
    gone.mkdir(exist_ok=True)
    out = W / "gone_out"
    shutil.rmtree(out, ignore_errors=True)
    make_net()
    cmd = (f"cd {gone} && rm -rf {gone} && {PY} -m fluxpart run {W / 'b' / 'site.toml'} "
           f"--out {out} --quiet; echo $? >&2; {PY} -m fluxpart verify --quiet {out}; "
           f"echo $? >&2; {PY} -m fluxpart batch {NET / 'sites.toml'} --quiet; echo $? >&2; "
           f"{PY} -m fluxpart run site.toml --out rel --quiet; echo $? >&2")
    done = _shell(cmd, cwd=W)
    lines = [line for line in done.stderr.strip().splitlines() if not
             line.startswith("warning:") and line.strip()]
    codes = [line for line in lines if line.isdigit()]
    said = [line for line in lines if line.startswith("error:")]
    record("run, verify and batch from a deleted current folder (absolute paths), then a "
           "relative one", codes == ["0", "0", "0", "2"] and len(said) == 1
           and "no longer exists" in said[0] and table_digests(out) == table_digests(W / "r0")
           and sites_verify(NET / "out") == [0] * 4, f"exits {codes}, {said!r:.200}")


def f_two_csv_exports():
    """Two CSV exports of two results into one folder at once: one whole export."""
    target = W / "csv2"
    shutil.rmtree(target, ignore_errors=True)
    procs = [start("export", "--csv", target, W / source) for source in ("r0", "r1")]
    done = [p.communicate(timeout=120) for p in procs]
    codes = [p.returncode for p in procs]
    one = [W / "csv2_a", W / "csv2_b"]
    for path, source in zip(one, ("r0", "r1"), strict=True):
        shutil.rmtree(path, ignore_errors=True)
        fp("export", "--csv", path, W / source)
    got = {p.name: p.read_bytes() for p in target.iterdir()} if target.exists() else {}
    whole = any(got == {p.name: p.read_bytes() for p in o.iterdir()} for o in one)
    record("two CSV exports into one folder at once", whole and 0 in codes
           and all(c == 0 or c == 2 for c in codes) and not leftovers(W),
           f"exits {codes}, one export whole {whole}, {[d[1][-80:] for d in done]}")


def f_no_locks():
    """A file system that gives no locks (flock raising ENOLCK, an NFS mount without its
    lock service): one line naming the locks, not a permission."""
    import errno
    folder = fresh("nolock")
    before = table_digests(folder)
    script = ("import errno, fcntl, sys\n"
              "def flock(fd, op):\n"
              "    raise OSError(errno.ENOLCK, 'No locks available')\n"
              "fcntl.flock = flock\n"
              "import fluxpart.cli as cli\nsys.exit(cli.main(sys.argv[1:]))\n")
    done = subprocess.run([PY, "-c", script, "run", "seed1.toml", "--out", str(folder),
                           "--quiet"], env=ENV, cwd=W / "b", capture_output=True, text=True)
    record("no file locks on the output's file system (ENOLCK)", one_line(done)
           and "writable" not in done.stderr and "lock" in done.stderr
           and _intact(folder, before), f"exit {done.returncode}, {_stderr_tail(done, 190)}"
           f" ({os.strerror(errno.ENOLCK)})")


def f_blas_kernel():
    """OpenBLAS forced to another CPU kernel (``OPENBLAS_CORETYPE=Prescott``) and NumPy's
    SIMD dispatch cut back (``NPY_DISABLE_CPU_FEATURES``): run, then verify under the
    machine's own settings: bit-identical, or within rounding with the platform named."""
    for label, extra in (("OPENBLAS_CORETYPE=Prescott", dict(OPENBLAS_CORETYPE="Prescott")),
                         ("NPY_DISABLE_CPU_FEATURES=AVX2 FMA3 AVX512F ...",
                          dict(NPY_DISABLE_CPU_FEATURES="AVX512F AVX512CD AVX512_SKX AVX2 "
                                                        "FMA3 F16C"))):
        out = W / "kern"
        shutil.rmtree(out, ignore_errors=True)
        done = fp("run", "site.toml", "--out", out, "--quiet", env=dict(ENV, **extra))
        checked = fp("verify", out)
        first = checked.stdout.splitlines()[0] if checked.stdout else ""
        same = table_digests(out) == table_digests(W / "r0")
        record(f"run under {label}, verified under the machine's defaults", done.returncode
               == 0 and checked.returncode == 0 and (same or "platform differs" in first),
               f"run {done.returncode}, identical {same}, verify {checked.returncode} "
               f"{first[:110]!r}")


def f_batch_scratch():
    """A Dask batch whose ``TMPDIR`` (where Dask's workers keep their scratch space) is a
    full 64 kB tmpfs, and one with ``HOME`` missing (Dask's configuration folder):
    completes, or one line; every site written verifies."""
    full, mounted = _full_tmpfs("btmp")
    try:
        for label, extra in (("TMPDIR a full tmpfs", dict(TMPDIR=str(full))),
                             ("HOME missing", dict(HOME="/nonexistent",
                                                   XDG_CONFIG_HOME="/nonexistent/c"))):
            if "TMPDIR" in extra and not mounted:
                record(f"a Dask batch with {label}", False, "mount refused: not probed")
                continue
            make_net()
            done = fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET,
                      env=dict(ENV, **extra), timeout=600)
            codes = sites_verify(NET / "out") if (NET / "out").exists() else []
            record(f"a Dask batch with {label}", ((done.returncode == 0 and codes == [0] * 4)
                   or one_line(done)) and all(c == 0 for c in codes)
                   and "Traceback" not in done.stderr,
                   f"exit {done.returncode}, {_stderr_tail(done, 160)}, verify {codes}")
    finally:
        if mounted:
            subprocess.run(["umount", str(full)])


# ------------------------------------------------------------------ round faults39
def f_two_sites_new_parent():
    """Two runs of two sites at once into one parent folder that neither finds (both
    create it)."""
    parent = W / "np_parent"
    shutil.rmtree(parent, ignore_errors=True)
    procs = [start("run", cfg, "--out", parent / "deep" / name, "--quiet")
             for cfg, name in (("site.toml", "a"), ("seed1.toml", "b"))]
    codes = [p.wait() for p in procs]
    errs = [p.stderr.read().strip()[-120:] for p in procs]
    same = (table_digests(parent / "deep" / "a") == table_digests(W / "r0")
            and table_digests(parent / "deep" / "b") == table_digests(W / "r1"))
    record("two sites run at once into one new parent folder", codes == [0, 0] and same
           and not leftovers(parent / "deep"), f"exits {codes}, identical {same}, {errs}")


def f_copy_during_swap():
    """``cp -r`` of a result folder, again and again, while run replaces it: each copy
    verifies only where it holds one whole result (the old or the new: its tables and
    manifest), and verify names the others. One verify per kind of copy."""
    folder = fresh("cpswap")
    copies = W / "cpswap_copies"
    shutil.rmtree(copies, ignore_errors=True)
    copies.mkdir()

    def kind(d):
        files = dict(table_digests(d), manifest=hashlib.sha256(
            (d / "manifest.json").read_bytes()).hexdigest()
            if (d / "manifest.json").is_file() else None)
        return tuple(sorted(files.items()))
    old = kind(folder)
    proc = start("run", "seed1.toml", "--out", folder, "--quiet")
    n = 0
    while proc.poll() is None and n < 400:
        subprocess.run(["cp", "-r", str(folder), str(copies / f"c{n}")], capture_output=True)
        n += 1
    proc.wait()
    whole = {old, kind(folder)}
    kinds = {}
    for copy in sorted(copies.iterdir()):
        kinds.setdefault(kind(copy), []).append(copy)
    wrong, seen = [], []
    for key, members in kinds.items():
        done = verify(members[0], "--input", W / "b" / "tower.csv")
        seen.append((len(members), key in whole, done.returncode))
        if (done.returncode == 0) != (key in whole) or (done.returncode != 0 and not
                                                        done.stdout + done.stderr):
            wrong.append((members[0].name, done.returncode, _stderr_tail(done, 80)))
    record(f"cp -r of a result while run replaces it ({n} copies)", proc.returncode == 0
           and not wrong, f"(copies, whole, verify exit) {seen}, wrong {wrong[:2]}")


def f_noexec_tmpfs():
    """A result on a file system that keeps no owners' rights to run code (tmpfs
    noexec,nosuid,nodev): run, report, verify and a CSV export."""
    parent = W / "noexec"
    parent.mkdir(exist_ok=True)         # a fresh tmpfs over it: nothing of an earlier trial
    if not _mounted(parent, "-t", "tmpfs", "-o", "size=50m,noexec,nosuid,nodev", "tmpfs"):
        record("a result on a noexec tmpfs", False, "mount refused: not probed")
        return
    try:
        codes = [fp("run", "site.toml", "--out", parent / "r", "--quiet").returncode,
                 fp("report", "--quiet", parent / "r").returncode,
                 verify(parent / "r").returncode,
                 fp("export", "--csv", parent / "csv", parent / "r").returncode]
        record("a result on a noexec,nosuid,nodev tmpfs: run, report, verify, export",
               codes == [0] * 4 and table_digests(parent / "r") == table_digests(W / "r0"),
               f"exits {codes}")
    finally:
        subprocess.run(["umount", str(parent)])


def f_copy_without_times():
    """A result copied as a file system that keeps no times or rights leaves it (a FAT
    stick: ``cp -r`` without -p, every file dated 1980 and mode 0755, or 0444 and the
    folder 0555), then verify and report."""
    results_ = []
    for mode in ("755", "444"):
        copy = W / f"notimes_{mode}"
        shutil.rmtree(copy, ignore_errors=True)
        subprocess.run(["cp", "-r", str(W / "r0"), str(copy)], check=True)
        for p in copy.rglob("*"):
            os.utime(p, (315532800, 315532800))
            if p.is_file():
                os.chmod(p, int(mode, 8))
        ver = verify(copy)
        rep = fp("report", "--quiet", copy)
        results_.append((mode, ver.returncode, rep.returncode, _stderr_tail(rep, 90)))
        for p in copy.rglob("*"):
            os.chmod(p, 0o755)
    record("a result copied without times or rights (FAT-like), then verify and report",
           all(r[1] == 0 and r[2] == 0 for r in results_), f"{results_}")


def f_report_folder_gone_or_file():
    """The result's report folder deleted, or replaced by a file of that name (a user's
    note); then report, verify and run again."""
    seen, ok = [], True
    for how in ("deleted", "a file"):
        folder = fresh("rgone")
        assert fp("report", "--quiet", folder).returncode == 0
        shutil.rmtree(folder / "report")
        if how == "a file":
            (folder / "report").write_text("my notes\n")
        ver = verify(folder)
        rep = fp("report", "--quiet", folder)
        ver2 = verify(folder)
        run = fp("run", "site.toml", "--out", folder, "--quiet")
        note = (folder / "report").read_text() if (folder / "report").is_file() else None
        if how == "deleted":
            good = ver.returncode == 0 and rep.returncode == 0 and ver2.returncode == 0 \
                and run.returncode == 0
        else:           # the note is the user's: named by verify, kept by report and run
            good = (ver.returncode == 1 and "report is a plain file" in ver.stdout
                    and one_line(rep) and one_line(run) and note == "my notes\n")
        ok &= good
        seen.append(f"{how}: verify {ver.returncode} {_stderr_tail(ver, 70)}, report "
                    f"{rep.returncode} {_stderr_tail(rep, 90)}, run {run.returncode} "
                    f"{_stderr_tail(run, 70)}")
    record("the result's report folder deleted or a file, then verify, report, run",
           ok, "; ".join(seen))


def f_verify_inputs_moved_twice():
    """verify of a result whose input moved, ``--input`` given twice (the same file;
    the file and another)."""
    folder = fresh("vin")
    moved = W / "vin_moved"
    shutil.rmtree(moved, ignore_errors=True)
    moved.mkdir()
    shutil.copy2(W / "b" / "tower.csv", moved / "tower.csv")
    shutil.copy2(W / "b" / "tower.csv", moved / "other.csv")
    with open(moved / "other.csv", "a") as f:
        f.write("\n")
    twice = verify(folder, "--input", moved / "tower.csv", "--input", moved / "tower.csv")
    other = verify(folder, "--input", moved / "tower.csv", "--input", moved / "other.csv")
    record("verify with the input moved and --input given twice",
           twice.returncode == 0 or one_line(twice), f"exit {twice.returncode} "
           f"{_stderr_tail(twice, 140)}")
    record("verify with --input given for the input and for another file",
           one_line(other) or (other.returncode == 1 and "other.csv" in other.stdout + other.stderr),
           f"exit {other.returncode} {_stderr_tail(other, 140)}")


def f_config_link_retargeted():
    """The site config a symbolic link, retargeted to another config after run (a
    shared ``current.toml``): verify must not pass the result as reproduced from the
    other config's settings without saying so."""
    link = W / "b" / "current.toml"
    link.unlink(missing_ok=True)
    link.symlink_to("site.toml")
    out = W / "cfglink"
    shutil.rmtree(out, ignore_errors=True)
    run = fp("run", "current.toml", "--out", out, "--quiet")
    link.unlink()
    link.symlink_to("seed1.toml")
    ver = fp("verify", out)
    link.unlink()
    record("the config a link retargeted to another config after run, then verify",
           run.returncode == 0 and (ver.returncode == 0 and "config" in ver.stdout.lower()
                                    or ver.returncode != 0),
           f"run {run.returncode}, verify {ver.returncode} {ver.stdout.strip()[-160:]!r}")


def f_batch_two_configs_one_folder():
    """Two site configs of one batch whose results would share a folder name (two
    copies of one site's folder: the stems clash), and one config matched twice (two
    patterns naming it)."""
    make_net()
    shutil.copytree(NET / "a", NET / "a_copy")
    done = fp("batch", "sites.toml", "--quiet", cwd=NET)
    folders = sorted(p.name for p in (NET / "out").iterdir() if (p / "manifest.json").is_file())
    record("two configs of one batch whose stems clash", done.returncode == 0
           and len(folders) == 5 and sites_verify(NET / "out") == [0] * 5
           and not leftovers(NET / "out"), f"exit {done.returncode}, "
           f"{_stderr_tail(done, 100)}, folders {folders}")
    make_net()
    (NET / "sites.toml").write_text('[batch]\nsites = ["*/site.toml", "a/site.toml"]\n'
                                    'out = "out"\n')
    done = fp("batch", "sites.toml", "--quiet", cwd=NET)
    folders = sorted(p.name for p in (NET / "out").iterdir() if (p / "manifest.json").is_file()) \
        if (NET / "out").is_dir() else []
    record("one config matched twice in one batch", (done.returncode == 0 and len(folders) == 4
                                                    or one_line(done))
           and not leftovers(NET / "out") if (NET / "out").is_dir() else one_line(done),
           f"exit {done.returncode}, {_stderr_tail(done, 120)}, folders {folders}")


def f_reader_leaves_verify_diff_report():
    """verify, diff and report (not quiet) into ``| head -1`` (SIGPIPE at the reader's
    exit; Python ignores SIGPIPE, so EPIPE)."""
    fresh("hp")
    for label, cmd in (("verify", f"verify {W / 'hp'}"),
                       ("diff", f"diff {W / 'r0'} {W / 'r1'}"),
                       ("report", f"report {W / 'hp'}")):
        done = _shell(f"{PY} -m fluxpart {cmd} | head -c 20 >/dev/null; "
                      "echo ${PIPESTATUS[0]} >&2")
        lines = done.stderr.strip().splitlines()
        code = int(lines[-1]) if lines and lines[-1].isdigit() else None
        tb = "Traceback" in done.stderr or "Exception ignored" in done.stderr
        record(f"{label} | head -c 20 (the reader leaves)", not tb and code is not None
               and code in (0, 1, 141) and not leftovers(W),
               f"exit {code}, traceback {tb}, {lines[:-1][-1:]!r:.140}")


def f_new_out_readonly_mount():
    """``--out`` a new folder on a read-only bind mount, and ``report --out`` there."""
    parent = W / "robind"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    if not (_mounted(parent, "--bind", str(parent))
            and _mounted(parent, "-o", "remount,bind,ro")):
        record("--out on a read-only bind mount", False, "mount refused: not probed")
        return
    try:
        run = fp("run", "site.toml", "--out", parent / "new", "--quiet")
        rep = fp("report", "--quiet", "--out", parent / "rep", W / "r0")
        csv = fp("export", "--csv", parent / "csv", W / "r0")
    finally:
        subprocess.run(["umount", str(parent)])
    for label, done in (("run --out", run), ("report --out", rep), ("export --csv", csv)):
        record(f"{label} a new folder on a read-only bind mount", one_line(done)
               and "read-only" in done.stderr.lower(), f"exit {done.returncode} "
               f"{_stderr_tail(done, 140)}")


def f_env_differs_run_verify():
    """run under one hash seed and one thread count, verify --exact under another."""
    cases = {"PYTHONHASHSEED 1 then 2": (dict(PYTHONHASHSEED="1"), dict(PYTHONHASHSEED="2")),
             "threads 1 then 2": (dict(OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1"),
                                  dict(OMP_NUM_THREADS="2", OPENBLAS_NUM_THREADS="2"))}
    for label, (first, second) in cases.items():
        out = W / ("envd_" + label.split()[0])
        shutil.rmtree(out, ignore_errors=True)
        run = fp("run", "site.toml", "--out", out, "--quiet", env=dict(ENV, **first))
        ver = fp("verify", "--exact", out, env=dict(ENV, **second))
        record(f"run, then verify --exact, {label}", run.returncode == 0
               and ver.returncode == 0 and table_digests(out) == table_digests(W / "r0"),
               f"run {run.returncode}, verify {ver.returncode} {ver.stdout.strip()[-100:]!r}")


def f_two_reports_at_once():
    """Two reports of one result at once, and verify while a report is written."""
    folder = fresh("tr")
    procs = [start("report", "--quiet", folder) for _ in range(2)]
    ver = verify(folder)
    codes = [p.wait() for p in procs]
    errs = [p.stderr.read().strip()[-100:] for p in procs]
    pages = sorted(p.name for p in (folder / "report").iterdir()) \
        if (folder / "report").is_dir() else None
    record("two reports of one result at once, verify meanwhile",
           all(c == 0 or (c == 2 and e.startswith("error:")) for c, e in zip(codes, errs, strict=True))
           and 0 in codes and ver.returncode == 0 and verify(folder).returncode == 0
           and not leftovers(folder), f"exits {codes} {errs}, verify {ver.returncode}, "
           f"report {pages and len(pages)} entries, left {leftovers(folder)}")


def f_out_is_current_folder():
    """``run --out .`` from an empty folder, and from the folder of the input."""
    empty = W / "dot"
    shutil.rmtree(empty, ignore_errors=True)
    empty.mkdir()
    cfg = W / "b" / "site.toml"
    done = _shell(f"{PY} -m fluxpart run {cfg} --out . --quiet; echo $? >&2; "
                  "ls -a >&2; pwd -P >&2", cwd=empty)
    inb = fp("run", "site.toml", "--out", ".", "--quiet")
    record("run --out . from an empty folder", "Traceback" not in done.stderr
           and (table_digests(empty) == table_digests(W / "r0") or "error:" in done.stderr),
           f"{done.stderr.strip()[-200:]!r}")
    record("run --out . from the input's folder", one_line(inb)
           and (W / "b" / "tower.csv").is_file(), f"exit {inb.returncode} "
           f"{_stderr_tail(inb, 140)}")


def f_export_into_result():
    """``export --csv`` into a folder inside the result, then verify and run again."""
    folder = fresh("exin")
    exp = fp("export", "--csv", folder / "csv", folder)
    ver = verify(folder)
    run = fp("run", "site.toml", "--out", folder, "--quiet")
    record("export --csv into the result's own folder, then verify and run",
           (exp.returncode == 0 and ver.returncode == 0 or one_line(exp))
           and (run.returncode == 0 or one_line(run)),
           f"export {exp.returncode} {_stderr_tail(exp, 80)}, verify {ver.returncode} "
           f"{_stderr_tail(ver, 80)}, run {run.returncode} {_stderr_tail(run, 80)}")

def f_ten_years_of_minutes():
    """Ten years of 1-minute records (5.3 million lines, about 270 MB; invented, the
    Quillmoor config): check with memory to spare (refused for its spacing; about 2.6 GB
    and 80 s on the 2-core machine) and under ``ulimit -v`` 1.5 GB (the file named with
    its size and lines, not "give the process more memory" alone)."""
    import resource

    import numpy as np
    import pandas as pd
    big = W / "minutes"
    big.mkdir(exist_ok=True)
    if not (big / "tower.csv").is_file():
        t = pd.date_range("2011-01-01 00:01", "2021-01-01 00:00", freq="1min")
        n, rng = len(t), np.random.default_rng(0)
        hour = (t.hour + t.minute / 60).to_numpy()
        rg = np.clip(800 * np.sin(np.pi * (hour - 6) / 12), 0, None)
        ta = 8 + 10 * np.sin(2 * np.pi * (t.day_of_year.to_numpy() - 110) / 365)
        pd.DataFrame({"stamp_end": t.strftime("%Y%m%d%H%M"),
                      "co2_exchange": (2 * np.exp(0.07 * ta) - 0.02 * rg
                                       + rng.normal(0, 1, n)).round(3),
                      "solar_down": rg.round(1), "air_temp_c": ta.round(2),
                      "vpd_kpa": 0.8, "friction_velocity": 0.3, "soil_temp_5cm": ta.round(1),
                      "rel_humidity": 70.0, "qc_co2": 0}).to_csv(big / "tower.csv", index=False)
        shutil.copy2(W / "b" / "site.toml", big / "site.toml")
    spare = fp("check", "site.toml", cwd=big, timeout=900)
    tight = limited({resource.RLIMIT_AS: 1500 << 20}, "check", "site.toml", cwd=big,
                    timeout=900)
    record("ten years of 1-minute records, memory to spare", one_line(spare)
           and "1 minutes" in spare.stderr, f"exit {spare.returncode} {_stderr_tail(spare, 120)}")
    record("ten years of 1-minute records under ulimit -v 1.5 GB", one_line(tight)
           and "lines" in tight.stderr and "tower.csv" in tight.stderr,
           f"exit {tight.returncode} {_stderr_tail(tight, 160)}")

def f_batch_resumed_half_staged():
    """A batch killed while one site's folder was half-staged (a staging folder holding
    half that site's tables, the site's folder not yet swapped in), then run again."""
    make_net()
    first = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
    out = NET / "out"
    site = sorted(p for p in out.iterdir() if (p / "manifest.json").is_file())[0]
    staging = out / f".{site.name}.staging-k1ll3d00"
    staging.mkdir()
    for table in sorted(site.glob("*.parquet"))[:5]:
        shutil.copy2(table, staging / table.name)
    (staging / "daily.parquet").write_bytes(b"PAR1")          # a table cut mid-write
    shutil.rmtree(site)
    rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
    record("a batch killed with one site half-staged, then run again", first.returncode == 0
           and rerun.returncode == 0 and site.is_dir() and not leftovers(out)
           and sites_verify(out) == [0] * 4, f"exit {rerun.returncode} "
           f"{_stderr_tail(rerun, 120)}, left {leftovers(out)}")


# ------------------------------------------------------------------ round faults40
#: Run the command line with a stop (a signal the process sends itself) at one named
#: point of ``run``: argv[1] the point, argv[2] the signal's number, the rest the command.
_STOP_AT = r"""
import os, pathlib, signal, sys
import fluxpart.cli as cli, fluxpart.io as fio, fluxpart.resultdir as rd, fluxpart.ustar_runs as ur
point, signum = sys.argv[1], int(sys.argv[2])
def stop():
    os.kill(os.getpid(), signum)
def before(owner, name, when=lambda *a, **k: True):
    real = getattr(owner, name)
    def patched(*args, **kwargs):
        if when(*args, **kwargs):
            stop()
        return real(*args, **kwargs)
    setattr(owner, name, patched)
calls = {"n": 0}
def nth(k):
    def when(*args, **kwargs):
        calls["n"] += 1
        return calls["n"] == k
    return when
if point == "reading":
    before(fio.SiteConfig, "read")
elif point == "ustar runs":
    before(ur, "runs_with_release")
elif point.startswith("table "):
    before(rd, "write_table", nth(int(point.split()[1])))
elif point in ("run log", "manifest"):
    before(rd, "atomic_write_bytes", lambda path, data: pathlib.Path(path).name ==
           {"run log": "run-log.json", "manifest": "manifest.json"}[point])
elif point == "report figure":
    import fluxpart.report as rp
    before(rp, "atomic_write_bytes")
elif point == "csv file":
    import fluxpart.export_csv as ec
    before(ec, "set_mode", nth(3))
elif point.startswith("network table "):
    import fluxpart.batch as fb
    before(fb, "_replace_folder", nth(int(point.split()[2])))
elif point == "swap":
    before(rd, "_exchange")
elif point == "after the exchange":
    real_exchange = rd._exchange
    def exchanged(first, second):
        done = real_exchange(first, second)
        stop()
        return done
    rd._exchange = exchanged
elif point == "between two renames":
    # a file system without RENAME_EXCHANGE (NFS, SMB, FUSE): the old result renamed
    # aside, the stop before the new one is renamed in
    rd._exchange = lambda first, second: False
    before(pathlib.Path, "rename", lambda self, target: ".staging-" in self.name)
if os.environ.get("STOP_TWICE"):
    # the stop sent again as the stopped command removes its staging (Ctrl-C pressed twice)
    import shutil
    real_rmtree, again = shutil.rmtree, {"sent": False}
    def rmtree(path, *args, **kwargs):
        name = os.path.basename(os.fsdecode(path))
        if not again["sent"] and (".staging-" in name or name.endswith(".tmp")
                                  or name.startswith(".network_")):
            again["sent"] = True
            stop()
        return real_rmtree(path, *args, **kwargs)
    shutil.rmtree = rmtree
sys.exit(cli.main(sys.argv[3:]))
"""

#: Points of ``run`` where :func:`f_stops_at_points` stops it (tables are written in
#: the order of the result's dict: 1 is the record table, 9 the last).
STOP_POINTS = ("reading", "ustar runs", "table 1", "table 5", "table 9", "run log",
               "manifest", "swap", "after the exchange", "between two renames")


def stopped_at(point, signum, *args, env=None):
    return subprocess.run([PY, "-c", _STOP_AT, point, str(int(signum)), *map(str, args)],
                          env=env or ENV, cwd=W / "b", capture_output=True, text=True,
                          timeout=300)


def f_stopped_twice():
    """Ctrl-C (SIGINT) and SIGTERM sent twice to run and report: the second while the
    first's unwinding removes the staging folder (an impatient user; ``kill`` repeated).
    One line, the old result (and page) whole, nothing left."""
    env = dict(ENV, STOP_TWICE="1")
    for signum in (signal.SIGINT, signal.SIGTERM):
        folder = fresh("st2", "r1")
        fp("report", "--quiet", folder)
        page = (folder / "report" / "report.html").read_bytes()
        before = table_digests(folder)
        for stale in leftovers(W):
            shutil.rmtree(W / stale, ignore_errors=True)
        done = stopped_at("table 5", signum, "run", "site.toml", "--out", folder, "--quiet",
                          env=env)
        rep = stopped_at("report figure", signum, "report", "--quiet", folder, env=env)
        shutil.rmtree(W / "st2_csv", ignore_errors=True)
        exp = stopped_at("csv file", signum, "export", "--csv", W / "st2_csv", folder, env=env)
        left = leftovers(W) + leftovers(folder)
        record(f"{signal.Signals(signum).name} twice during run, report and export --csv",
               one_line(done, 128 + signum) and one_line(rep, 128 + signum) and not left
               and one_line(exp, 128 + signum) and not (W / "st2_csv").exists()
               and table_digests(folder) == before and verify(folder).returncode == 0
               and (folder / "report" / "report.html").read_bytes() == page,
               f"run {done.returncode} {_stderr_tail(done, 100)}, report {rep.returncode} "
               f"{_stderr_tail(rep, 100)}, export {exp.returncode}, left {left}")


def f_stops_at_points():
    """SIGTERM, SIGINT (Ctrl-C) and SIGKILL at ten points of ``run`` replacing a result
    (seed 1's by seed 0's): reading, the u* runs, writing the first, a middle and the last
    table, the run log, the manifest, just before the swap, just after the exchange (the
    old result not yet removed), and between the two renames of a file system without
    an atomic exchange. The folder holds the old result or the new one whole (never a
    mix); a caught stop leaves nothing; after SIGKILL verify says a run was stopped, and
    the next run removes what it left and writes the new result."""
    old, new = table_digests(W / "r1"), table_digests(W / "r0")
    for point in STOP_POINTS:
        for signum in (signal.SIGTERM, signal.SIGINT, signal.SIGKILL):
            folder = fresh("stp", "r1")
            for stale in leftovers(W):
                shutil.rmtree(W / stale, ignore_errors=True)
            done = stopped_at(point, signum, "run", "site.toml", "--out", folder, "--quiet")
            left = leftovers(W)
            # verify first: it puts back a result a kill between two renames left aside
            check = fp("verify", folder) if signum == signal.SIGKILL else verify(folder)
            now = table_digests(folder) if folder.is_dir() else None
            whole = now in (old, new)
            told = (not left or "stopped" in check.stdout + check.stderr)
            if signum == signal.SIGKILL:
                stop_ok = done.returncode == -9
            else:
                stop_ok = one_line(done, 128 + signum) and not left
            again = fp("run", "site.toml", "--out", folder, "--quiet")
            recovered = (again.returncode == 0 and table_digests(folder) == new
                         and not leftovers(W) and verify(folder).returncode == 0)
            record(f"{signal.Signals(signum).name} at {point} of run", stop_ok and whole
                   and check.returncode == 0 and told and recovered,
                   f"exit {done.returncode} {_stderr_tail(done, 90)}, folder "
                   f"{'old' if now == old else 'new' if now == new else 'MIXED/none'}, left "
                   f"{left}, verify {check.returncode} told {told}, next run "
                   f"{again.returncode} {_stderr_tail(again, 80)}")
    folder = fresh("stp", "r1")
    killed = stopped_at("between two renames", signal.SIGKILL, "run", "site.toml", "--out",
                        folder, "--quiet")
    began = time.time()
    rep = fp("report", "--quiet", folder)
    took = time.time() - began
    record("report after a run killed between two renames (no folder, the old one aside)",
           killed.returncode == -9 and rep.returncode == 0 and "was missing" in rep.stderr
           and table_digests(folder) == old and not leftovers(W) and took < 20
           and not (W / ".stp.lock").exists(), f"report {rep.returncode} in {took:.0f} s "
           f"{_stderr_tail(rep, 120)}, left {leftovers(W)}")



def _tmpfs(name, size):
    """A fresh tmpfs of `size` (mount(8) size=, e.g. ``"300k"``) at `name` in the scratch
    folder; its path, or None where the container refuses the mount."""
    target = W / name
    if target.is_mount():
        subprocess.run(["umount", str(target)])
    shutil.rmtree(target, ignore_errors=True)
    target.mkdir()
    return target if _mounted(target, "-t", "tmpfs", "-o", f"size={size}", "tmpfs") else None


def f_full_disk_each_table():
    """A real full disk (tmpfs) met at each stage of ``run``'s writing: room for about one
    table, a third, half, most of the tables, and all but the manifest (sizes from the
    result's own files, page-rounded): one line naming the disk, nothing left there."""
    files = sorted((W / "r0").iterdir())
    pages = [-(-f.stat().st_size // 4096) for f in files]
    total = sum(pages)
    for label, kib in (("the first tables", 40), ("a third of the tables", total * 4 // 3),
                       ("half the tables", total * 4 // 2), ("most tables", total * 4 - 120),
                       ("all but the manifest", total * 4 - 12)):
        disk = _tmpfs("fulltab", f"{kib}k")
        if disk is None:
            record("a full disk at each table of run", False, "mount refused: not probed")
            return
        try:
            done = fp("run", "site.toml", "--out", disk / "new", "--quiet")
            inside = sorted(p.name for p in disk.iterdir())
            held = (one_line(done) and "space" in done.stderr and inside == []) or (
                done.returncode == 0 and table_digests(disk / "new") == table_digests(W / "r0"))
            record(f"a full disk ({kib} kB tmpfs) at {label} of run", held,
                   f"exit {done.returncode} {_stderr_tail(done, 150)}, left there {inside}")
        finally:
            subprocess.run(["umount", str(disk)])


def f_full_disk_report_netcdf():
    """A real full disk met by ``report`` (its figures and page, in the result folder on
    a tmpfs with 60 kB free) and by ``export --netcdf`` (a file on a 200 kB tmpfs): one
    line, the result whole and verified, no half-written page or NetCDF file."""
    disk = _tmpfs("fullrep", "800k")
    if disk is None:
        record("a full disk under report and export --netcdf", False, "mount refused")
        return
    try:
        folder = disk / "res"
        shutil.copytree(W / "r0", folder)
        free = shutil.disk_usage(disk).free
        (disk / "filler").write_bytes(b"\0" * max(0, free - 60_000))
        before = table_digests(folder)
        rep = fp("report", "--quiet", folder)
        record("a full disk (60 kB free) under report", one_line(rep) and "space" in rep.stderr
               and not (folder / "report").exists() and not leftovers(folder)
               and table_digests(folder) == before and verify(
                   folder, "--input", W / "b" / "tower.csv").returncode == 0, f"exit {rep.returncode} {_stderr_tail(rep)}, "
               f"left {leftovers(folder)}")
    finally:
        subprocess.run(["umount", str(disk)])
    disk = _tmpfs("fullnc", "200k")
    try:
        done = fp("export", "--netcdf", disk / "site.nc", W / "r0")
        inside = sorted(p.name for p in disk.iterdir())
        record("a full disk (200 kB tmpfs) under export --netcdf", one_line(done)
               and "space" in done.stderr and inside == [],
               f"exit {done.returncode} {_stderr_tail(done)}, left there {inside}")
    finally:
        subprocess.run(["umount", str(disk)])


_CLOCK_STEP = """
import threading, time
_offset = [0.0]
_real, _real_ns = time.time, time.time_ns
time.time = lambda: _real() + _offset[0]
time.time_ns = lambda: _real_ns() + int(_offset[0] * 1e9)
def _step():
    _offset[0] = {step}
_timer = threading.Timer({after}, _step)
_timer.daemon = True
_timer.start()
"""


def f_clock_steps_back():
    """The wall clock stepped back an hour and a day while run, report and verify work
    (NTP correcting a clock that ran ahead; ``time.time`` patched by a sitecustomize
    that steps it after 0.5 s: faketime is not installed, and a TZ set mid-run cannot
    reach a running process): tables byte-identical, the folder verified, nothing left."""
    for label, step in (("an hour", -3600), ("a day", -86400)):
        site = W / f"clockstep{-step}"
        site.mkdir(exist_ok=True)
        (site / "sitecustomize.py").write_text(_CLOCK_STEP.format(step=step, after=0.5))
        env = dict(ENV, PYTHONPATH=f"{site}{os.pathsep}{TREE}")
        folder = fresh("clks", "r1")
        steps = [fp("run", "site.toml", "--out", folder, "--quiet", env=env),
                 fp("report", "--quiet", folder, env=env), verify(folder, env=env)]
        record(f"the clock stepped back {label} during run, report, verify",
               all(s.returncode == 0 for s in steps) and table_digests(folder) ==
               table_digests(W / "r0") and not leftovers(W) and not leftovers(folder),
               f"exits {[s.returncode for s in steps]}, "
               f"{[e for s in steps for e in errlines(s)][:1]!r:.150}")


def f_parquet_footer_damaged():
    """verify of a result whose table's Parquet footer (the metadata at its end, its
    length and the closing magic kept) has bytes overwritten, and one whose footer
    length is damaged: exit 1 naming the table, no traceback; report and export refuse
    in one line."""
    for label, how in (("metadata bytes overwritten", "meta"), ("footer length damaged",
                                                               "length")):
        folder = fresh(f"foot_{how}")
        path = folder / "daily.parquet"
        data = bytearray(path.read_bytes())
        if how == "meta":
            length = int.from_bytes(data[-8:-4], "little")
            start = len(data) - 8 - length
            data[start + length // 2: start + length // 2 + 16] = b"\xff" * 16
        else:
            data[-8:-4] = (len(data) * 3).to_bytes(4, "little")
        path.write_bytes(bytes(data))
        done = fp("verify", folder)
        rep = fp("report", "--quiet", folder)
        exp = fp("export", "--netcdf", W / "foot.nc", folder)
        tb = any("Traceback" in d.stderr for d in (done, rep, exp))
        record(f"a Parquet footer with its {label} under verify, report, export",
               done.returncode == 1 and "daily" in done.stdout and not tb
               and one_line(rep) and one_line(exp) and not (W / "foot.nc").exists(),
               f"verify {done.returncode} {done.stdout.splitlines()[:1]!r:.120}, report "
               f"{rep.returncode} {_stderr_tail(rep, 100)}, export {exp.returncode}")


def f_report_while_run_swaps():
    """report of a folder while run replaces it (seed 1 by seed 0), three times at
    staggered offsets: each report completes or says one line; the folder ends as run's
    new result, verified; a page left in it describes the tables beside it."""
    seen = []
    for delay in (0.0, 0.6, 1.2):
        folder = fresh("rws", "r1")
        proc = start("run", "site.toml", "--out", folder, "--quiet")
        time.sleep(delay)
        rep = fp("report", "--quiet", folder)
        proc.communicate(timeout=120)
        good = verify(folder).returncode
        page = folder / "report" / "report.html"
        matches = True
        if page.is_file():
            drawn = page.read_bytes()
            fresh_copy = fresh("rws_check", "rws")
            shutil.rmtree(fresh_copy / "report")
            fp("report", "--quiet", fresh_copy)
            matches = _same_report(folder, fresh_copy) or drawn == (
                fresh_copy / "report" / "report.html").read_bytes()
        seen.append((proc.returncode, rep.returncode, good, page.is_file(), matches))
        ok = (proc.returncode == 0 and (rep.returncode == 0 or one_line(rep)) and good == 0
              and matches and table_digests(folder) == table_digests(W / "r0")
              and not leftovers(W) and not leftovers(folder))
        record(f"report while run replaces the folder (report {delay} s after run began)",
               ok, f"run {proc.returncode}, report {rep.returncode} {_stderr_tail(rep, 100)}, "
               f"verify {good}, page kept {page.is_file()}, page matches {matches}")


def f_home_read_only():
    """``HOME`` on a read-only bind mount (a shared account, a container's read-only
    home; XDG folders unset): matplotlib's and fontconfig's caches, Dask's configuration
    and local directory. run, report, verify, export --netcdf and a batch complete with
    no noise but ``warning:`` lines; tables byte-identical."""
    home = W / "rohome"
    if home.is_mount():
        subprocess.run(["umount", str(home)])
    shutil.rmtree(home, ignore_errors=True)
    home.mkdir()
    if not (_mounted(home, "--bind", str(home)) and _mounted(home, "-o", "remount,bind,ro")):
        record("HOME read-only", False, "mount refused: not probed")
        return
    try:
        env = {k: v for k, v in ENV.items() if not k.startswith(("XDG_", "MPLCONFIGDIR",
                                                                   "DASK_"))}
        env["HOME"] = str(home)
        folder = fresh("roh")
        out = W / "roh_run"
        shutil.rmtree(out, ignore_errors=True)
        (W / "roh.nc").unlink(missing_ok=True)
        steps = {"run": fp("run", "site.toml", "--out", out, "--quiet", env=env),
                 "report": fp("report", "--quiet", folder, env=env),
                 "verify": verify(folder, env=env),
                 "export": fp("export", "--netcdf", W / "roh.nc", folder, env=env)}
        make_net()
        steps["batch"] = fp("batch", "sites.toml", "--quiet", cwd=NET, env=env)
        noise = {k: [x for x in d.stderr.splitlines() if x and not x.startswith("warning:")]
                 for k, d in steps.items()}
        record("HOME on a read-only mount under run, report, verify, export, batch",
               all(d.returncode == 0 for d in steps.values()) and not any(noise.values())
               and table_digests(out) == table_digests(W / "r0")
               and sites_verify(NET / "out") == [0] * 4,
               f"exits {[d.returncode for d in steps.values()]}, noise "
               f"{ {k: v[:1] for k, v in noise.items() if v}!r:.300}")
    finally:
        subprocess.run(["umount", str(home)])


def f_tmpdir_missing_or_read_only():
    """``TMPDIR`` a folder that does not exist, and one on a read-only bind mount, under
    run, report, verify, export --netcdf and a batch: each completes or stops with one
    line naming TMPDIR; nothing left."""
    ro = W / "rotmp"
    if ro.is_mount():
        subprocess.run(["umount", str(ro)])
    ro.mkdir(exist_ok=True)
    mounted = _mounted(ro, "--bind", str(ro)) and _mounted(ro, "-o", "remount,bind,ro")
    try:
        _under_tmpdirs((("missing", W / "no_such_tmp"), ("read-only", ro if mounted else None)),
                       "tmpm", batch=True)
    finally:
        if mounted:
            subprocess.run(["umount", str(ro)])


def f_locale_printed_numbers():
    """What run, verify and diff print (standard output) under LANG=C and under
    LC_ALL=de_DE.UTF-8 (a decimal comma): the same text, numbers with a point."""
    loc = _localedef("de_DE.UTF-8", "UTF-8", "de_DE")
    outs = {}
    for label, extra in (("C", dict(LANG="C", LC_ALL="C")),
                         ("de_DE", dict(LANG="de_DE.UTF-8", LC_ALL="de_DE.UTF-8",
                                        LOCPATH=str(loc)))):
        env = dict(ENV, **extra)
        out = W / "lpn"
        shutil.rmtree(out, ignore_errors=True)
        texts = [fp("run", "site.toml", "--out", out, env=env).stdout,
                 fp("verify", out, env=env).stdout, fp("diff", W / "r1", out, env=env).stdout]
        outs[label] = [t.replace(str(out), "OUT") for t in texts]
    same = outs["C"] == outs["de_DE"]
    first = [(a, b) for a, b in zip("\n".join(outs["C"]).splitlines(),
                                    "\n".join(outs["de_DE"]).splitlines(), strict=False)
             if a != b][:1]
    record("run, verify, diff print the same under LANG=C and de_DE.UTF-8", same
           and any(outs["C"]), f"same {same} {first!r:.200}")


def f_stdin_closed_run_batch():
    """run and a Dask batch with standard input closed (``<&-``: a cron job, a daemon):
    the first file opened then takes descriptor 0."""
    shutil.rmtree(W / "sc_run", ignore_errors=True)
    make_net()
    cases = [("run", f"{PY} -m fluxpart run site.toml --out {W / 'sc_run'} --quiet <&-; "
              "echo $? >&2", W / "b"),
             ("batch", f"{PY} -m fluxpart batch sites.toml --quiet <&-; echo $? >&2", NET)]
    for label, command, cwd in cases:
        done = _shell(command, cwd=cwd)
        lines = done.stderr.strip().splitlines()
        code = int(lines[-1]) if lines and lines[-1].isdigit() else None
        noise = [x for x in lines[:-1] if not x.startswith("warning:")]
        good = (verify(W / "sc_run").returncode == 0 if label == "run"
                else sites_verify(NET / "out") == [0] * 4)
        record(f"standard input closed under {label}", code == 0 and not noise and good,
               f"exit {code}, noise {noise[:2]!r:.200}, verified {good}")


def f_batch_stopped_at_network_tables():
    """SIGTERM (once, and again as its staging is removed) and SIGKILL to a Dask batch (two
    local workers) as it replaces its second network table, every site already written: a
    caught stop one line and nothing left;
    after either, the network files are refused until the rerun, which completes and
    leaves nothing."""
    for signum, twice in ((signal.SIGTERM, False), (signal.SIGTERM, True),
                          (signal.SIGKILL, False)):
        env = dict(ENV, STOP_TWICE="1") if twice else ENV
        make_net()
        done = subprocess.run([PY, "-c", _STOP_AT, "network table 2", str(int(signum)),
                               "batch", "sites.toml", "--quiet", "--workers", "2"], env=env,
                              cwd=NET, capture_output=True, text=True, timeout=300)
        out = NET / "out"
        # a network table's staging is ``.NAME.`` + 8 characters: every hidden entry counts
        left = sorted(p.name for p in out.iterdir() if p.name.startswith("."))
        lines = [x for x in done.stderr.splitlines() if not x.startswith("warning:")]
        stop_ok = (done.returncode == -9 if signum == signal.SIGKILL else
                   done.returncode == 128 + signum and len(lines) == 1
                   and left in ([], [".network.json.lock"]))
        refused = subprocess.run([PY, "-c", "import sys; from fluxpart.batch import read_network;"
                                  " read_network(sys.argv[1])", str(out)], env=env,
                                 capture_output=True, text=True)
        rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
        after = subprocess.run([PY, "-c", "import sys; from fluxpart.batch import read_network;"
                                " read_network(sys.argv[1])", str(out)], env=env,
                               capture_output=True, text=True)
        record(f"{signal.Signals(signum).name}{' twice' if twice else ''} to a batch as it "
               "replaces a network table",
               stop_ok and refused.returncode != 0 and rerun.returncode == 0
               and after.returncode == 0 and sites_verify(out) == [0] * 4
               and not [p for p in out.iterdir() if p.name.startswith(".")],
               f"exit {done.returncode} {lines[-1:]!r:.120}, left {left}, network read before "
               f"the rerun {refused.returncode} {refused.stderr.strip()[-100:]!r}, rerun "
               f"{rerun.returncode}, left after {[p.name for p in out.iterdir() if p.name[0] == '.']}")


def f_batch_ctrl_c_twice():
    """Ctrl-C twice (SIGINT to every process of the job, 0.2 s apart: an impatient user)
    during a Dask batch with a site written: one line, no orphans, nothing half-written,
    the rerun completes the rest."""
    proc = batch_with_a_site_written()
    kids = descendants(proc.pid)
    os.killpg(proc.pid, signal.SIGINT)
    time.sleep(0.2)
    with_second = proc.poll() is None
    if with_second:
        os.killpg(proc.pid, signal.SIGINT)
    orphans, left, codes, lines, rerun = _after_batch_stop(proc, kids)
    record("Ctrl-C twice to every process of a Dask batch", proc.returncode == 130
           and len(lines) == 1 and not orphans and not left and all(c == 0 for c in codes)
           and rerun.returncode == 0 and sites_verify(NET / "out") == [0] * 4,
           f"second sent {with_second}, exit {proc.returncode}, {len(lines)} stderr lines "
           f"{lines[:3]!r:.300}, orphans {orphans}, left {left}, rerun {rerun.returncode}")


def f_batch_parent_killed():
    """kill -9 of the batch process alone (it runs the local Dask scheduler; its workers
    are not signalled): the workers must not live on, the folder holds whole sites only,
    and the rerun completes."""
    proc = batch_with_a_site_written()
    kids = descendants(proc.pid)
    proc.kill()
    proc.communicate(timeout=60)
    deadline = time.time() + 30
    while time.time() < deadline and any(Path(f"/proc/{k}").exists() for k in kids):
        time.sleep(0.5)
    orphans = [(k, _cmdline(k)[-60:]) for k in kids if Path(f"/proc/{k}").exists()]
    for k, _ in orphans:
        os.kill(k, signal.SIGKILL)
    codes = sites_verify(NET / "out") if (NET / "out").exists() else []
    rerun = fp("batch", "sites.toml", "--quiet", cwd=NET)
    record("kill -9 of the batch process alone (its scheduler), workers not signalled",
           not orphans and all(c == 0 for c in codes) and rerun.returncode == 0
           and not leftovers(NET / "out") and sites_verify(NET / "out") == [0] * 4,
           f"orphans after 30 s {orphans}, {len(codes)} sites whole, rerun {rerun.returncode} "
           f"{_stderr_tail(rerun, 100)}")


def f_batch_external_scheduler_killed():
    """A batch on an existing Dask scheduler (``dask scheduler`` and two ``dask worker``
    processes on 127.0.0.1) whose scheduler is killed (-9) once a site is written: one
    line, exit 2 within a minute; the sites written whole; the rerun on a new scheduler
    completes."""
    dask = Path(PY).with_name("dask")
    make_net()
    port = 18786 + os.getpid() % 1000

    def cluster():
        sched = subprocess.Popen([str(dask), "scheduler", "--host", "127.0.0.1", "--port",
                                  str(port), "--no-dashboard"], env=ENV, cwd=NET,
                                 stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(3)
        workers = [subprocess.Popen([str(dask), "worker", f"tcp://127.0.0.1:{port}",
                                     "--nthreads", "1", "--no-dashboard"], env=ENV, cwd=NET,
                                    stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
                   for _ in range(2)]
        time.sleep(3)
        return sched, workers
    sched, workers = cluster()
    try:
        proc = start("batch", "sites.toml", "--quiet", "--scheduler", f"tcp://127.0.0.1:{port}",
                     cwd=NET)
        deadline = time.time() + 90
        while time.time() < deadline and proc.poll() is None and not (
                (NET / "out").exists() and list((NET / "out").glob("*/manifest.json"))):
            time.sleep(0.05)
        sched.kill()
        began = time.time()
        try:
            out, err = proc.communicate(timeout=180)
        except subprocess.TimeoutExpired:
            proc.kill()
            out, err = proc.communicate()
        took = time.time() - began
    finally:
        for p in [sched, *workers]:
            p.kill()
            p.wait()
    time.sleep(1)
    codes = sites_verify(NET / "out") if (NET / "out").exists() else []
    lines = [line for line in err.splitlines() if not line.startswith("warning:")]
    sched, workers = cluster()
    try:
        rerun = fp("batch", "sites.toml", "--quiet", "--scheduler", f"tcp://127.0.0.1:{port}",
                   cwd=NET)
    finally:
        for p in [sched, *workers]:
            p.kill()
            p.wait()
    # one line for each site whose outcome was lost (exit 1: those sites failed)
    record("an existing Dask scheduler killed during a batch", proc.returncode in (1, 2)
           and lines and all(line.startswith("error: site") and "scheduler" in line
                             for line in lines) and took < 90
           and all(c == 0 for c in codes) and rerun.returncode == 0
           and sites_verify(NET / "out") == [0] * 4 and not leftovers(NET / "out"),
           f"exit {proc.returncode} after {took:.0f} s, {len(lines)} lines {lines[:1]!r:.300}, "
           f"{len(codes)} sites whole, rerun {rerun.returncode} {_stderr_tail(rerun, 100)}")


def f_parent_renamed_during_run():
    """The result's parent folder renamed while run computes (a user tidying a project
    folder): the run writes nowhere half; one line or the result whole in one place."""
    parent = W / "prn"
    moved = W / "prn moved"
    for p in (parent, moved):
        shutil.rmtree(p, ignore_errors=True)
    parent.mkdir()
    shutil.copytree(W / "r1", parent / "res")
    proc = start("run", "site.toml", "--out", parent / "res", "--quiet")
    time.sleep(0.8)
    parent.rename(moved)
    out, err = proc.communicate(timeout=120)
    done = subprocess.CompletedProcess([], proc.returncode, out, err)
    # the run writes to the path it was given (made again, as for any new --out), or
    # stops in one line; the moved folder keeps the earlier result whole
    here = table_digests(moved / "res")
    there = table_digests(parent / "res") if parent.exists() else None
    record("the result's parent renamed while run computes", (one_line(done) or (
           proc.returncode == 0 and there == table_digests(W / "r0")))
           and here == table_digests(W / "r1") and not leftovers(moved)
           and not (parent.exists() and leftovers(parent)),
           f"exit {proc.returncode} {err.strip()[-150:]!r}, the path given made again "
           f"{parent.exists()} holding the new result {there == table_digests(W / 'r0')}, "
           f"left {leftovers(moved)}")


def f_stop_while_waiting_for_lock():
    """SIGTERM and Ctrl-C to a second run waiting for the first's lock on one folder:
    one line, the first completes, no lock file or staging left."""
    for signum in (signal.SIGTERM, signal.SIGINT):
        folder = fresh("swl", "r1")
        first = start("run", "site.toml", "--out", folder, "--quiet")
        time.sleep(0.4)
        second = start("run", "seed1.toml", "--out", folder)
        time.sleep(1.0)
        second.send_signal(signum)
        out2, err2 = second.communicate(timeout=60)
        first.communicate(timeout=120)
        lines = [x for x in err2.splitlines() if not x.startswith(("warning:", "waiting"))
                 and "waiting" not in x]
        record(f"{signal.Signals(signum).name} to a run waiting for another's lock",
               second.returncode == 128 + signum and len(lines) == 1 and first.returncode == 0
               and table_digests(folder) == table_digests(W / "r0") and not leftovers(W)
               and not (W / ".swl.lock").exists(),
               f"second {second.returncode} {err2.strip()[-160:]!r}, first {first.returncode}, "
               f"lock left {(W / '.swl.lock').exists()}")


# ------------------------------------------------------------------ round faults41
def _parquets(folder):
    """Every Parquet file below `folder` by its relative path, with its bytes' digest."""
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(Path(folder).rglob("*.parquet"))}


def _net_sites(out):
    try:
        done = subprocess.run([PY, "-c", "import sys; from fluxpart.batch import read_network; "
                               "print(read_network(sys.argv[1]).site.nunique())", str(out)],
                              env=ENV, capture_output=True, text=True, timeout=120)
        return int(done.stdout.strip())
    except ValueError:
        return None


def _seeded_net(sites=4, out_name="out"):
    """:func:`make_net` with each site's own seed (distinct tables), `sites` sites."""
    shutil.rmtree(NET, ignore_errors=True)
    for i in range(sites):
        site = f"s{i:02d}"
        (NET / site).mkdir(parents=True)
        shutil.copy2(W / "b" / "tower.csv", NET / site / "tower.csv")
        text = (W / "b" / "site.toml").read_text().replace("seed = 0", f"seed = {i}")
        (NET / site / f"{site}.toml").write_text(
            text.replace("Quillmoor grassland (fictional)", f"Quillmoor {site} (fictional)"))
    (NET / "sites.toml").write_text(f'[batch]\nsites = ["*/s*.toml"]\nout = "{out_name}"\n')


THREADS_BATCH = """
import sys
from dask.distributed import LocalCluster
from fluxpart.batch import run_batch
if __name__ == "__main__":
    with LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                      dashboard_address=None) as cluster:
        report = run_batch("sites.toml", scheduler=cluster.scheduler_address, out=sys.argv[1])
    sys.exit(report.exit_code)
"""


def f_batch_same_bytes_as_run():
    """Each Parquet file of 3 sites from ``batch`` against the same site's ``run``, and
    every Parquet file (network tables too) of 2 process workers against 1, and against
    one process of 2 threads (``LocalCluster(processes=False)`` through ``run_batch``)."""
    _seeded_net(3)
    two = fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET, timeout=600)
    shutil.move(NET / "out", NET / "out2")
    one = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET, timeout=600)
    shutil.move(NET / "out", NET / "out1")
    (NET / "threads.py").write_text(THREADS_BATCH)
    threads = subprocess.run([PY, "threads.py", "out_t"], env=ENV, cwd=NET,
                             capture_output=True, text=True, timeout=600)
    runs = {site: fp("run", f"{site}.toml", "--out", NET / f"run_{site}", "--quiet",
                     cwd=NET / site).returncode for site in ("s00", "s01", "s02")}
    differ = [f"{site}/{name}" for site in runs
              for name, digest in _parquets(NET / f"run_{site}").items()
              if _parquets(NET / "out2" / site).get(name) != digest]
    base = _parquets(NET / "out2")
    record("batch's Parquet files of 3 sites byte for byte their run's; 1 vs 2 workers; "
           "threads vs processes", two.returncode == one.returncode == threads.returncode == 0
           and set(runs.values()) == {0} and not differ and len(base) > 40
           and _parquets(NET / "out1") == base and _parquets(NET / "out_t") == base,
           f"exits {two.returncode}/{one.returncode}/{threads.returncode}, runs {runs}, "
           f"{len(base)} files, differ from run {differ[:3]}, 1 worker same "
           f"{_parquets(NET / 'out1') == base}, threads same {_parquets(NET / 'out_t') == base}")


#: A worker's ``open`` of a tower file below a folder named FOLDER does ACTION first.
OPEN_HOOK = """
import builtins, os, signal, threading, time
_open = builtins.open
def _hooked(file, *args, **kwargs):
    if "/FOLDER/" in str(file) and str(file).endswith(".csv"):
        ACTION
    return _open(file, *args, **kwargs)
builtins.open = _hooked
"""
HUNG_OPEN = OPEN_HOOK.replace("FOLDER", "hung").replace(
    "ACTION", "time.sleep(10 ** 6)  # read(2) on a hard NFS mount that stopped answering")


def f_batch_hung_site():
    """A site whose input lies on a share that stopped answering (every ``open`` of it
    blocks: a sitecustomize in the workers), ``--site-time-limit 0.3``: that site fails
    with one line, the others are written whole and the network tables hold them."""
    _seeded_net(3)
    shutil.move(NET / "s01", NET / "hung")
    hook = W / "hung_hook"
    hook.mkdir(exist_ok=True)
    (hook / "sitecustomize.py").write_text(HUNG_OPEN)
    env = dict(ENV, PYTHONPATH=f"{hook}:{ENV['PYTHONPATH']}")
    began = time.time()
    done = fp("batch", "sites.toml", "--quiet", "--site-time-limit", "0.3", cwd=NET, env=env,
              timeout=240)
    lines = errlines(done)
    codes = sites_verify(NET / "out")
    record("a site on a hung mount under --site-time-limit 0.3", done.returncode == 1
           and len(lines) == 1 and "SiteTimeLimitError" in lines[0] and "hung" in lines[0]
           and codes == [0, 0] and _net_sites(NET / "out") == 2,
           f"exit {done.returncode} after {time.time() - began:.0f} s, {lines!r:.200}, "
           f"verify {codes}")


def _external_cluster(port, *worker_args):
    """A Dask scheduler on 127.0.0.1:`port` and one worker (`worker_args`), each in a
    session of its own; returns the two processes once the worker has registered."""
    dask = str(Path(PY).parent / "dask")
    scheduler = subprocess.Popen([dask, "scheduler", "--host", "127.0.0.1", "--port",
                                  str(port), "--dashboard-address", "127.0.0.1:0"], env=ENV,
                                 stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                 start_new_session=True)
    time.sleep(4)
    worker = subprocess.Popen([dask, "worker", f"tcp://127.0.0.1:{port}", "--nthreads", "1",
                               "--nworkers", "1", "--preload", "fluxpart.batch", *worker_args],
                              env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                              start_new_session=True)
    time.sleep(8)
    return scheduler, worker


def f_batch_worker_memory_limit():
    """An existing cluster whose one worker has a memory limit below a site's need
    (``dask worker --memory-limit 150MB``; fluxpart's imports alone take ~136 MiB): Dask
    pauses it (above 80 %) or its nanny kills and restarts it (above 95 %). Held where
    each site fails with one line naming the memory limit, or the batch says within
    ~60 s that no worker can start a site (then stopped by ``timeout``)."""
    _seeded_net(2)
    scheduler, worker = _external_cluster(8937, "--memory-limit", "150MB")
    try:
        done = subprocess.run(["timeout", "100", PY, "-m", "fluxpart", "batch", "sites.toml",
                               "--scheduler", "tcp://127.0.0.1:8937"], env=ENV, cwd=NET,
                              capture_output=True, text=True, timeout=200)
    finally:
        for proc in (worker, scheduler):
            os.killpg(proc.pid, signal.SIGTERM)
            proc.wait(timeout=60)
    lines = [x for x in done.stderr.splitlines() if not x.startswith("warning:")]
    failed = [x for x in lines if x.startswith("error: site")]
    noted = [x for x in lines if x.startswith("note:") and "paused" in x]
    record("a worker whose memory limit is below one site's need (dask worker "
           "--memory-limit 150MB)", "Traceback" not in done.stderr and (
               (done.returncode == 1 and len(failed) == 2
                and all("--memory-limit" in x for x in failed))
               or (done.returncode == 124 and len(noted) == 1)),
           f"exit {done.returncode}, {lines!r:.300}")


def f_batch_thirty_sites():
    """30 sites on 2 workers, the first failing at once (a latitude of 200) and the last
    late (its record cut to 14.6 days: the E0 fit refuses it): every other folder whole,
    each failure named once, in failures.parquet once, the network tables hold 28."""
    _seeded_net(30)
    first, last = NET / "s00" / "s00.toml", NET / "s29" / "tower.csv"
    first.write_text(first.read_text().replace("latitude = 49.3", "latitude = 200"))
    last.write_text("".join(last.read_text().splitlines(keepends=True)[:701]))
    done = fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET, timeout=900)
    lines = errlines(done)
    codes = sites_verify(NET / "out")
    failures = subprocess.run([PY, "-c", "import pandas as pd; print(*pd.read_parquet("
                               "'out/failures.parquet').site)"], env=ENV, cwd=NET,
                              capture_output=True, text=True).stdout.split()
    record("30 sites on 2 workers, one failing early and one late", done.returncode == 1
           and len(lines) == 2 and "s00" in lines[0] and "s29" in lines[1]
           and codes == [0] * 28 and failures == ["s00", "s29"]
           and _net_sites(NET / "out") == 28 and not leftovers(NET / "out"),
           f"exit {done.returncode}, {[x[:90] for x in lines]}, {len(codes)} verify "
           f"{set(codes)}, failures {failures}")


def f_batch_sites_file_edited():
    """The network file rewritten (2 sites, another out) while its batch of 6 runs: the
    batch keeps what it read at its start."""
    _seeded_net(6)
    proc = start("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
    deadline = time.time() + 120
    while time.time() < deadline and proc.poll() is None and not (
            (NET / "out").exists() and list((NET / "out").glob("*/manifest.json"))):
        time.sleep(0.05)
    (NET / "sites.toml").write_text('[batch]\nsites = ["s00/s00.toml", "s01/s01.toml"]\n'
                                    'out = "other"\n')
    out, err = proc.communicate(timeout=600)
    codes = sites_verify(NET / "out")
    record("the network file edited while its batch runs", proc.returncode == 0
           and codes == [0] * 6 and _net_sites(NET / "out") == 6
           and not (NET / "other").exists(),
           f"exit {proc.returncode}, verify {codes}, other made {(NET / 'other').exists()}")


def f_batch_two_at_once():
    """Two batches of one network file into one output folder at once (the second with
    --force): both end 0, every site verifies, the network tables are readable and whole."""
    _seeded_net(4)
    first = start("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
    second = start("batch", "sites.toml", "--quiet", "--workers", "1", "--force", cwd=NET)
    errs = [proc.communicate(timeout=600)[1] for proc in (first, second)]
    codes = sites_verify(NET / "out")
    record("two batches into one output folder at once", first.returncode == 0
           and second.returncode == 0 and codes == [0] * 4 and _net_sites(NET / "out") == 4
           and not leftovers(NET / "out") and not any("Traceback" in e for e in errs),
           f"exits {first.returncode}/{second.returncode}, verify {codes}, "
           f"left {leftovers(NET / 'out')}")


def f_batch_odd_network_path():
    """The network file, its sites and its output all below a path with spaces and
    letters beyond ASCII (``Netz Türme ü 2021/ré seau``, out ``Ergebnis ø [1]``)."""
    global NET
    saved, NET = NET, W / "Netz Türme ü 2021" / "ré seau"
    try:
        _seeded_net(3, "Ergebnis ø [1]")
        done = fp("batch", "sites.toml", "--quiet", cwd=NET)
        out = NET / "Ergebnis ø [1]"
        codes = sites_verify(out) if out.exists() else []
        record("a network on a path with spaces and non-ASCII letters", done.returncode == 0
               and codes == [0] * 3 and _net_sites(out) == 3,
               f"exit {done.returncode}, verify {codes}")
    finally:
        NET = saved


def f_batch_long_site_name():
    """A site config whose stem is 249 bytes long (the longest a .toml name allows): its
    key is cut with a digest, its folder and partition fit NAME_MAX."""
    _seeded_net(2)
    (NET / "s00" / "s00.toml").rename(NET / "s00" / f"s{'x' * 248}.toml")
    done = fp("batch", "sites.toml", "--quiet", cwd=NET)
    codes = sites_verify(NET / "out")
    record("a site config named with 249 bytes", done.returncode == 0 and codes == [0, 0]
           and _net_sites(NET / "out") == 2,
           f"exit {done.returncode}, {errlines(done)[:1]}, verify {codes}")


def f_batch_listed_config_not_a_file():
    """A site config listed by path that is a named pipe, a dangling link or a folder: one
    line naming what it is (before: "no such file"), exit 2, nothing made."""
    seen = []
    for kind in ("pipe", "link", "folder"):
        _seeded_net(1)
        entry = NET / "odd.toml"
        if kind == "pipe":
            os.mkfifo(entry)
        elif kind == "link":
            entry.symlink_to("/nonexistent/share/odd.toml")
        else:
            entry.mkdir()
        (NET / "sites.toml").write_text('[batch]\nsites = ["s00/s00.toml", "odd.toml"]\n'
                                        'out = "out"\n')
        done = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=60)
        seen.append((kind, one_line(done) and "no such file" not in done.stderr
                     and not (NET / "out").exists(), errlines(done)[:1]))
    record("a listed site config that is a pipe, a dangling link or a folder",
           all(ok for _, ok, _ in seen), f"{[(k, ok, str(x)[-70:]) for k, ok, x in seen]}")


def f_batch_scratch_unusable():
    """Dask's local directory not usable (``DASK_TEMPORARY_DIRECTORY`` below a file, and
    missing): one line, exit 2, and no new --out (before: an empty one was left)."""
    _seeded_net(2)
    seen = []
    for scratch in (NET / "s00" / "tower.csv" / "dask", W / "no-such-scratch"):
        done = fp("batch", "sites.toml", "--quiet", cwd=NET,
                  env=dict(ENV, DASK_TEMPORARY_DIRECTORY=str(scratch)))
        seen.append((one_line(done), (NET / "out").exists()))
    record("Dask's local directory not usable", all(ok and not made for ok, made in seen),
           f"(one line, out made) {seen}")


def f_batch_killed_then_input_changed():
    """kill -9 of a whole batch with a site written, one site's input edited, the batch
    run again: the edited site is processed again ("input changed"), every site verifies
    and the network tables hold all four."""
    proc = batch_with_a_site_written()
    os.killpg(proc.pid, signal.SIGKILL)
    proc.communicate(timeout=60)
    time.sleep(1)
    fp("batch", "sites.toml", "--quiet", cwd=NET)            # finish what was killed
    tower = NET / "b" / "tower.csv"
    rows = tower.read_text().splitlines(keepends=True)
    rows[600] = rows[600].replace(",0.", ",1.", 1)
    tower.write_text("".join(rows))
    again = fp("batch", "sites.toml", cwd=NET)
    codes = sites_verify(NET / "out")
    record("kill -9 of a batch, one site's input changed, the batch run again",
           again.returncode == 0 and "1 processed, 3 up to date" in again.stdout
           and "b-site (input changed)" in again.stdout and codes == [0] * 4
           and _net_sites(NET / "out") == 4,
           f"exit {again.returncode}, {again.stdout.splitlines()[:2]}, verify {codes}")


# ------------------------------------------------------------------ round faults42
def _whole_kind(folder, *sources):
    """Which of `sources` (result folders) `folder` holds whole (its tables and manifest
    byte for byte), "missing", or "mixed"."""
    import json

    def held(where):
        # the manifest's tables and settings: its code fingerprint is this tree's, which
        # may have changed since the sources were written
        path = Path(where) / "manifest.json"
        manifest = json.loads(path.read_text()) if path.is_file() else {}
        return table_digests(where), manifest.get("tables"), manifest.get("config")
    folder = Path(folder)
    if not folder.exists():
        return "missing"
    mine = held(folder)
    for source in sources:
        if mine == held(source):
            return Path(source).name
    return "mixed"


def _killed_at(offset, *args):
    """Run `args`, kill -9 it `offset` seconds after its start (or never where it ends
    first); the exit status."""
    proc = start(*args)
    try:
        proc.wait(timeout=offset)
    except subprocess.TimeoutExpired:
        proc.kill()
    proc.communicate(timeout=120)
    return proc.returncode


def _run_seconds(*args):
    begun = time.monotonic()
    assert fp(*args).returncode == 0
    return time.monotonic() - begun


def _writing_begins(parent, *args):
    """Seconds from the start of `args` (a run into `parent`) to its staging folder's
    appearance, and to its end."""
    begun = time.monotonic()
    proc, staged = start(*args), None
    while proc.poll() is None:
        if staged is None and any(".staging-" in p.name for p in Path(parent).iterdir()):
            staged = time.monotonic() - begun
        time.sleep(0.002)
    proc.communicate()
    assert proc.returncode == 0
    return staged or 0.0, time.monotonic() - begun


def f_kill9_random_moments_run():
    """kill -9 at 20 moments (seeded) of ``run`` replacing an earlier result, 10 drawn
    uniformly over its duration and 10 over its writing (from its staging folder's
    appearance to its end, as measured once): after each, the folder holds the old result
    or the new one whole, never a mix, and verifies; what a kill leaves in the parent is
    swept by the next run."""
    import random
    parent = W / "k9run"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    shutil.copytree(W / "r0", parent / "r")
    staged, span = _writing_begins(parent, "run", "seed1.toml", "--out", parent / "r",
                                   "--quiet")
    draw = random.Random(42)
    moments = [draw.uniform(0, span) for _ in range(10)] + [
        draw.uniform(staged, span) for _ in range(10)]
    seen, wrong = {}, []
    for trial, moment in enumerate(moments):
        folder = parent / "r"
        shutil.rmtree(folder, ignore_errors=True)
        shutil.copytree(W / "r0", folder)
        code = _killed_at(moment, "run", "seed1.toml", "--out", folder, "--quiet")
        kind = _whole_kind(folder, W / "r0", W / "r1")
        seen[kind] = seen.get(kind, 0) + 1
        if kind in ("mixed", "missing") or code not in (0, -9):
            wrong.append((trial, code, kind, leftovers(parent)))
        elif trial % 5 == 0 and verify(folder, "--input", W / "b" / "tower.csv").returncode:
            wrong.append((trial, code, kind, "verify failed"))
    left = leftovers(parent)
    again = fp("run", "seed1.toml", "--out", parent / "r", "--quiet")
    record("kill -9 at 20 random moments of run into an earlier result",
           not wrong and again.returncode == 0 and not leftovers(parent),
           f"writing from {staged:.2f} of {span:.2f} s, (kind: count) {seen}, wrong "
           f"{wrong[:3]}, left before the next run {left}, after it {leftovers(parent)}")


def _report_files(folder):
    report = Path(folder) / "report"
    return sorted(p.name for p in report.iterdir()) if report.is_dir() else None


def f_kill9_random_moments_report_export():
    """kill -9 at 10 random moments each of ``report`` redrawing a result's page and of
    ``export --netcdf`` replacing a NetCDF file and ``export --csv`` into a new folder:
    the page is the old or the new whole, the NetCDF file the old one or a whole new
    one, the CSV folder absent or whole; verify passes throughout."""
    import random
    folder = fresh("k9rep")
    assert fp("report", "--quiet", folder).returncode == 0
    page = _report_files(folder)
    nc, csv = W / "k9.nc", W / "k9csv"
    for p in (nc, csv):
        shutil.rmtree(p, ignore_errors=True) if p.is_dir() else p.unlink(missing_ok=True)
    assert fp("export", "--netcdf", nc, folder).returncode == 0
    assert fp("export", "--csv", csv, folder).returncode == 0
    nc_digest = hashlib.sha256(nc.read_bytes()).hexdigest()
    csv_files = sorted(p.name for p in csv.iterdir())
    shutil.rmtree(csv)
    spans = {"report": _run_seconds("report", "--quiet", folder),
             "netcdf": _run_seconds("export", "--netcdf", nc, folder),
             "csv": _run_seconds("export", "--csv", csv, folder)}
    shutil.rmtree(csv)
    draw = random.Random(7)
    wrong = []
    for trial in range(10):
        _killed_at(draw.uniform(0, spans["report"]), "report", "--quiet", folder)
        if _report_files(folder) != page:
            wrong.append(("report", trial, _report_files(folder)))
        _killed_at(draw.uniform(0, spans["netcdf"]), "export", "--netcdf", nc, folder)
        if hashlib.sha256(nc.read_bytes()).hexdigest() != nc_digest:
            wrong.append(("netcdf", trial))
        _killed_at(draw.uniform(0, spans["csv"]), "export", "--csv", csv, folder)
        if csv.exists() and sorted(p.name for p in csv.iterdir()) != csv_files:
            wrong.append(("csv", trial, sorted(p.name for p in csv.iterdir())))
        shutil.rmtree(csv, ignore_errors=True)
    checked = verify(folder)
    hidden = sorted(p.name for p in W.iterdir() if p.name.startswith(".k9"))
    again = [fp("report", "--quiet", folder).returncode,
             fp("export", "--netcdf", nc, folder).returncode,
             fp("export", "--csv", csv, folder).returncode]
    swept = sorted(p.name for p in W.iterdir() if p.name.startswith(".k9"))
    record("kill -9 at random moments of report and export (NetCDF, CSV)",
           not wrong and checked.returncode == 0 and again == [0, 0, 0]
           and not leftovers(folder) and not swept,
           f"wrong {wrong[:3]}, verify {checked.returncode}, again {again}, left in the "
           f"result {leftovers(folder)}, beside the exports {hidden} -> {swept}")


def f_zip_round_trip():
    """A result and its input zipped (zip -r, and Python's zipfile, which keeps no
    rights) and unzipped elsewhere; verify of each copy."""
    import zipfile
    bundle = W / "zipped"
    shutil.rmtree(bundle, ignore_errors=True)
    (bundle / "src").mkdir(parents=True)
    shutil.copytree(W / "r0", bundle / "src" / "r0")
    shutil.copy2(W / "b" / "tower.csv", bundle / "src" / "tower.csv")
    subprocess.run(["zip", "-qr", str(bundle / "a.zip"), "r0", "tower.csv"],
                   cwd=bundle / "src", check=True)
    subprocess.run(["unzip", "-q", str(bundle / "a.zip"), "-d", str(bundle / "u1")],
                   check=True)
    with zipfile.ZipFile(bundle / "a.zip") as archive:
        archive.extractall(bundle / "u2")
    codes = [verify(bundle / u / "r0", "--input", bundle / u / "tower.csv").returncode
             for u in ("u1", "u2")]
    record("a result zipped and unzipped elsewhere (unzip, Python zipfile)",
           codes == [0, 0], f"verify exits {codes}")


def f_input_resaved_by_spreadsheet():
    """verify with the input re-saved: CRLF only (same text otherwise), and as a
    spreadsheet writes it (CRLF, trailing zeros dropped, same values)."""
    import csv as csv_module
    where = W / "resaved"
    shutil.rmtree(where, ignore_errors=True)
    where.mkdir()
    rows = list(csv_module.reader(open(W / "b" / "tower.csv", newline="")))
    (where / "crlf.csv").write_bytes((W / "b" / "tower.csv").read_bytes().replace(b"\n",
                                                                                   b"\r\n"))

    def shown(value):
        try:
            return repr(float(value)).removesuffix(".0") if "." in value else value
        except ValueError:
            return value
    with open(where / "sheet.csv", "w", newline="") as handle:
        writer = csv_module.writer(handle, lineterminator="\r\n")
        writer.writerow(rows[0])
        writer.writerows([shown(v) for v in row] for row in rows[1:])
    crlf = fp("verify", W / "r0", "--input", where / "crlf.csv")
    sheet = fp("verify", W / "r0", "--input", where / "sheet.csv")
    record("verify with the input re-saved with CRLF line ends",
           crlf.returncode == 0 and "re-saved" in crlf.stdout,
           f"exit {crlf.returncode}, {crlf.stdout.splitlines()[0][:70]!r}")
    record("verify with the input re-saved by a spreadsheet (CRLF, 0.0200 -> 0.02)",
           sheet.returncode == 1 and "every value equals" in sheet.stdout,
           f"exit {sheet.returncode}, says the values equal {'every value equals' in sheet.stdout}")


def f_parquet_rewritten_same_values():
    """One table of a result rewritten with the same values: by pandas (fluxpart's
    metadata lost) and by pyarrow with another compression (metadata kept); verify with
    and without the input: exit 1, the table named, and whether its values are the
    rerun's said only where a rerun compared them."""
    cases = {}
    for how, code in (("pandas", "import pandas as pd; d = pd.read_parquet(f); "
                                 "d.to_parquet(f)"),
                      ("gzip", "import pyarrow.parquet as pq; "
                               "pq.write_table(pq.read_table(f), f, compression='gzip')")):
        folder = fresh(f"pqre_{how}")
        subprocess.run([PY, "-c", f"f = {str(folder / 'daily.parquet')!r}; {code}"],
                       env=ENV, check=True)
        alone = fp("verify", folder)
        given = fp("verify", folder, "--input", W / "b" / "tower.csv")
        cases[how] = (alone.returncode, given.returncode,
                      "were compared with the rerun" in alone.stdout,
                      "bit-identical to the rerun" in given.stdout
                      or "values and metadata bit-identical" in given.stdout)
    record("a table rewritten with the same values (pandas; pyarrow gzip), verify",
           all(c == (1, 1, False, True) for c in cases.values()),
           f"(exit alone, exit with input, claims a comparison alone, says values equal) "
           f"{cases}")


def f_batch_site_alone():
    """verify of one site's folder of a batch output, copied out alone (the network
    files left behind), its input given."""
    make_net()
    assert fp("batch", "sites.toml", "--quiet", cwd=NET).returncode == 0
    site = next(p for p in sorted((NET / "out").iterdir()) if (p / "manifest.json").is_file())
    alone = W / "site_alone"
    shutil.rmtree(alone, ignore_errors=True)
    shutil.copytree(site, alone / site.name)
    found = verify(alone / site.name)
    given = verify(alone / site.name, "--input", NET / "a" / "tower.csv")
    record("verify of a batch site's folder copied out alone",
           given.returncode == 0 and (found.returncode == 0 or one_line(found)),
           f"exits {found.returncode} {_stderr_tail(found, 90)} / with --input "
           f"{given.returncode}")


def f_two_runs_existing_other_configs():
    """Two runs at once with different configs (seeds 0 and 1) into an existing result
    (of seed 1), a verify looping meanwhile: both end 0, the folder holds one whole run,
    every verify passes or names a replaced folder (never a mix)."""
    folder = fresh("two_existing", "r1")
    procs = [start("run", "site.toml", "--out", folder, "--quiet"),
             start("run", "seed1.toml", "--out", folder, "--quiet")]
    checks = []
    while any(p.poll() is None for p in procs):
        checks.append(verify(folder).returncode)
    codes = [p.wait() for p in procs]
    kind = _whole_kind(folder, W / "r0", W / "r1")
    record("two runs (seeds 0 and 1) at once into an existing result, verify meanwhile",
           codes == [0, 0] and kind in ("r0", "r1") and set(checks) <= {0}
           and verify(folder).returncode == 0 and not leftovers(W),
           f"exits {codes}, holds {kind}, verifies meanwhile {checks}")


_APPEND_DURING_READ = """
import sys, pathlib
import fluxpart.cli as cli
import fluxpart.io as fio
real = pathlib.Path.read_bytes
done = {"n": 0}
tail = pathlib.Path(sys.argv[1]).read_bytes()
def read_bytes(self):
    data = real(self)
    if self.name == "tower.csv" and not done["n"]:
        done["n"] = 1
        with open(self, "ab") as handle:    # a logger appends right after the first read
            handle.write(tail)
    return data
pathlib.Path.read_bytes = read_bytes
sys.exit(cli.main(sys.argv[2:]))
"""


def f_input_appended_during_read():
    """A logger appends records to the input while run reads it (after the first read of
    its bytes): the manifest records the SHA-256 of the bytes parsed, so verify passes
    with the file as it was read and names the appended file as another input."""
    bundle = W / "append"
    shutil.rmtree(bundle, ignore_errors=True)
    shutil.copytree(W / "b", bundle)
    before_bytes = (bundle / "tower.csv").read_bytes()
    lines = before_bytes.decode().splitlines(keepends=True)
    tail = bundle / "tail.csv"
    # the next 2 hours, one day later than the file's end (a logger's next sync)
    last = lines[-1].split(",")
    stamp = int(last[0])
    tail.write_text("".join(",".join([str(stamp + 100 * (k + 1))] + last[1:])
                            for k in range(2)))
    out = bundle / "r"
    done = subprocess.run([PY, "-c", _APPEND_DURING_READ, tail, "run", "site.toml", "--out",
                           out, "--quiet"], env=ENV, cwd=bundle, capture_output=True,
                          text=True, timeout=300)
    grown = (bundle / "tower.csv").read_bytes() != before_bytes
    (bundle / "read.csv").write_bytes(before_bytes)
    as_read = verify(out, "--input", bundle / "read.csv")
    now = verify(out)
    record("the input appended to while run reads it",
           done.returncode in (0, 2) and grown and (done.returncode == 2 or (
               as_read.returncode == 0 and now.returncode == 1)),
           f"run exit {done.returncode} {_stderr_tail(done, 90)}, appended {grown}, verify "
           f"as read {as_read.returncode}, as now {now.returncode}")


def f_out_symlink_other_disk():
    """--out a symbolic link to a folder on another file system (a tmpfs), holding an
    earlier result: run replaces it (link kept), kill -9 mid-run leaves it whole, verify."""
    disk = W / "otherdisk"
    disk.mkdir(exist_ok=True)
    if not _mounted(disk, "-t", "tmpfs", "-o", "size=50m", "tmpfs"):
        record("--out a link to another disk", False, "mount refused: not probed")
        return
    try:
        shutil.copytree(W / "r0", disk / "r")
        link = linked("odlink", disk / "r")
        span = _run_seconds("run", "site.toml", "--out", disk / "probe", "--quiet")
        killed = [_killed_at(span * f, "run", "seed1.toml", "--out", link, "--quiet")
                  for f in (0.5, 0.8, 0.95)]
        kinds = [_whole_kind(link, W / "r0", W / "r1")]
        done = fp("run", "seed1.toml", "--out", link, "--quiet")
        kinds.append(_whole_kind(link, W / "r0", W / "r1"))
        left = leftovers(disk) + leftovers(W)
        record("run --out a link to a result on another disk, kill -9 mid-run, run again",
               done.returncode == 0 and link.is_symlink() and kinds[-1] == "r1"
               and kinds[0] in ("r0", "r1") and verify(link).returncode == 0 and not left,
               f"killed {killed}, holds {kinds}, link kept {link.is_symlink()}, left {left}, "
               f"{_stderr_tail(done)}")
    finally:
        subprocess.run(["umount", str(disk)])


def f_git_crlf_checkout():
    """A result kept in git and checked out with core.autocrlf (manifest.json and
    run-log.json with CRLF line ends, the Parquet files binary): verify."""
    folder = fresh("crlfres")
    for name in ("manifest.json", "run-log.json"):
        path = folder / name
        path.write_bytes(path.read_bytes().replace(b"\n", b"\r\n"))
    done = verify(folder)
    record("verify of a result whose JSON files got CRLF line ends (git autocrlf)",
           done.returncode == 0, f"exit {done.returncode} {done.stdout.splitlines()[0][:80]!r}")


def f_manifest_number_edited():
    """A number of the manifest edited by hand (a table's row count 30 -> 31; the
    ustar_threshold 0.2 -> 0.25), and one rewritten in another spelling of the same
    value (0.2 -> 0.20, 2e-1): the edits fail verify naming the seal; the same values pass."""
    cases = {}
    for label, old, new in (("rows", '"rows": 30,', '"rows": 31,'),
                            ("threshold", '"ustar_threshold": 0.2,', '"ustar_threshold": 0.25,'),
                            ("spelling", '"ustar_threshold": 0.2,', '"ustar_threshold": 2e-1,')):
        folder = fresh(f"mnum_{label}")
        text = (folder / "manifest.json").read_text()
        assert old in text
        (folder / "manifest.json").write_text(text.replace(old, new, 1))
        done = verify(folder)
        cases[label] = (done.returncode, "seal" in done.stdout + done.stderr)
    record("a number of the manifest edited by hand, and respelled",
           cases["rows"] == (1, True) and cases["threshold"] == (1, True)
           and cases["spelling"][0] == 0, f"(exit, names the seal) {cases}")


def f_netcdf_through_link():
    """``export --netcdf`` given a symbolic link to the file on another folder (a shared
    disk), and a link into a folder that does not exist (a share not mounted): the link
    kept, the file it leads to replaced; the second one error line."""
    where = W / "nclink"
    shutil.rmtree(where, ignore_errors=True)
    (where / "shared").mkdir(parents=True)
    assert fp("export", "--netcdf", where / "shared" / "site.nc", W / "r0").returncode == 0
    before = (where / "shared" / "site.nc").stat().st_ino
    (where / "latest.nc").symlink_to(where / "shared" / "site.nc")
    (where / "gone.nc").symlink_to(where / "share" / "site.nc")
    done = fp("export", "--netcdf", where / "latest.nc", W / "r1")
    gone = fp("export", "--netcdf", where / "gone.nc", W / "r1")
    through = ((where / "latest.nc").is_symlink()
               and (where / "shared" / "site.nc").stat().st_ino != before)
    record("export --netcdf to a link to a shared file, and to a link into no folder",
           done.returncode == 0 and through and one_line(gone)
           and (where / "gone.nc").is_symlink() and not (where / "share").exists(),
           f"exit {done.returncode}, link kept and its file replaced {through}; into no "
           f"folder exit {gone.returncode} {_stderr_tail(gone, 80)}, link kept "
           f"{(where / 'gone.nc').is_symlink()}")


def f_staging_given_as_result():
    """The unfinished folder a run killed -9 while writing its tables leaves beside the
    result, given to verify, report and export --csv (an auditor's ``ls -a``): one line
    each, naming the folder it was writing."""
    parent = W / "stgres"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    shutil.copytree(W / "r0", parent / "r")
    stopped_at("table 5", signal.SIGKILL, "run", "seed1.toml", "--out", parent / "r",
               "--quiet")
    staged = [p for p in parent.iterdir() if ".staging-" in p.name]
    if not staged:
        record("a stopped run's staging given as a result", False, "no staging left: not probed")
        return
    done = [verify(staged[0], "--input", W / "b" / "tower.csv"),
            fp("report", "--quiet", staged[0]),
            fp("export", "--csv", parent / "csv", staged[0])]
    named = [one_line(d) and repr(str(parent / "r")) in d.stderr for d in done]
    record("a stopped run's staging folder given to verify, report and export",
           all(named) and _whole_kind(parent / "r", W / "r0", W / "r1") == "r0",
           f"one line naming the result {named}, {_stderr_tail(done[0], 100)}")


_AUDITOR_SCRIPT = """
import json, subprocess, sys
done = subprocess.run([sys.executable, "-m", "fluxpart", "verify", "--json", *sys.argv[1:]],
                      capture_output=True)
try:
    report = json.loads(done.stdout, parse_constant=lambda name: 1 / 0)
    print(done.returncode, report["verdict"], report["exit_code"], len(report["differences"]))
except ValueError:
    print(done.returncode, "unparsable" if done.stdout else "none", done.stderr[-60:])
"""


def f_verify_json():
    """An auditor's script reading ``verify --json`` (its own process, Python's json with
    NaN refused) of a genuine result, a tampered one, a missing folder, and a genuine one
    under the Latin-1 and C locales (output encodings that lack the en dash)."""
    tampered = fresh("vjson")
    data = (tampered / "daily.parquet").read_bytes()
    (tampered / "daily.parquet").write_bytes(data[:-9] + bytes([data[-9] ^ 1]) + data[-8:])
    seen = {}
    for label, folder, lang in (("genuine", W / "r0", None), ("tampered", tampered, None),
                                ("missing", W / "nowhere", None),
                                ("latin-1", W / "r0", "de_DE.ISO-8859-1"),
                                ("C", W / "r0", "C")):
        env = dict(ENV, LC_ALL=lang, PYTHONUTF8="0") if lang else ENV
        done = subprocess.run([PY, "-c", _AUDITOR_SCRIPT, folder], env=env, cwd=W / "b",
                              capture_output=True, text=True, timeout=300)
        seen[label] = done.stdout.strip()
    record("verify --json read by an auditor's script (genuine, tampered, missing, locales)",
           seen["genuine"].startswith("0 bit-identical 0 0")
           and seen["tampered"].startswith("1 not reproduced 1")
           and seen["missing"].startswith("2 none")
           and seen["latin-1"] == seen["C"] == seen["genuine"], f"{seen}")


# ------------------------------------------------------------------ round faults43
def f_out_holds_input():
    """--out an existing result into which the user put the input; --out the folder
    that holds the input's folder; --out the input's own folder given from elsewhere."""
    folder = fresh("inres")
    shutil.copy2(W / "b" / "tower.csv", folder / "tower.csv")
    text = (W / "b" / "site.toml").read_text()
    (W / "b" / "inres.toml").write_text(text.replace('path = "tower.csv"',
                                                     'path = "../inres/tower.csv"'))
    before = table_digests(W / "b")
    cases = [fp("run", "inres.toml", "--out", folder, "--quiet"),
             fp("run", "site.toml", "--out", "..", "--quiet"),
             fp("run", W / "b" / "site.toml", "--out", W / "b", "--quiet", cwd=W)]
    kept = ((folder / "tower.csv").is_file() and _whole_kind(folder, W / "r0") == "r0"
            and (W / "b" / "tower.csv").is_file() and table_digests(W / "b") == before)
    record("--out a result holding the input, the input folder's parent, the input folder",
           all(one_line(c) for c in cases) and kept and not leftovers(W),
           f"exits {[c.returncode for c in cases]}, inputs kept {kept}, "
           f"{[c.stderr.strip()[:60] for c in cases]}")


def f_relative_input_moved_up():
    """A result of an input given by a relative path (``run data/site.toml --out res``)
    moved up one level (``mv res ..``), and copied into a deeper folder, the input left
    where it was: verify finds the input where the run read it (its SHA-256 decides)."""
    where = W / "up"
    shutil.rmtree(where, ignore_errors=True)
    (where / "site" / "data").mkdir(parents=True)
    for name in ("tower.csv", "site.toml"):
        shutil.copy2(W / "b" / name, where / "site" / "data" / name)
    assert fp("run", "data/site.toml", "--out", "res", "--quiet",
              cwd=where / "site").returncode == 0
    (where / "site" / "res").rename(where / "res")
    shutil.copytree(where / "res", where / "archive" / "2021" / "res")
    moved = fp("verify", "res", cwd=where)
    deeper = fp("verify", W / "up" / "archive" / "2021" / "res")
    given = fp("verify", "res", "--input", "site/data/tower.csv", cwd=where)
    record("verify of a result moved up one level and copied deeper, its input left",
           moved.returncode == 0 and deeper.returncode == 0 and given.returncode == 0
           and "where the run read it" in moved.stdout,
           f"moved exit {moved.returncode} {_stderr_tail(moved, 90)}, copied deeper "
           f"{deeper.returncode}, given {given.returncode}")


def f_package_elsewhere():
    """verify by the same code installed at another path (a venv elsewhere: a folder
    with a space and a non-ASCII letter, stray non-Python files and a pycache beside it):
    the code fingerprint covers the code, not its place."""
    site = W / "other venv ü"
    shutil.rmtree(site, ignore_errors=True)
    site.mkdir()
    shutil.copytree(TREE / "fluxpart", site / "fluxpart",
                    ignore=shutil.ignore_patterns("__pycache__"))
    (site / "fluxpart" / "notes.txt").write_text("a user's notes\n")
    done = fp("verify", W / "r0", env=dict(ENV, PYTHONPATH=str(site)))
    record("verify by the same code installed at another path",
           done.returncode == 0 and "code" not in done.stdout.split("Caution")[0].lower(),
           f"exit {done.returncode}, {done.stdout.splitlines()[:1]}")


_OTHER_VERSIONS = """
import importlib.metadata as md, sys
real = md.version
md.version = lambda name: {"pandas": "3.0.4", "pyarrow": "25.0.0"}.get(name, real(name))
import fluxpart.cli as cli
sys.exit(cli.main(sys.argv[1:]))
"""


def f_verify_other_library_versions():
    """verify where the installed pandas and pyarrow report other minor versions than
    the run's (the version facts only, the code the same): the tables are bit-identical,
    and the environment lines must not say the numbers may differ as though they had."""
    done = subprocess.run([PY, "-c", _OTHER_VERSIONS, "verify", W / "r0"], env=ENV,
                          cwd=W / "b", capture_output=True, text=True, timeout=300)
    lines = [line for line in done.stdout.splitlines()
             if line.startswith("environment:") and " is installed, " in line]
    record("verify under other pandas and pyarrow versions (the version facts)",
           done.returncode == 0 and len(lines) == 2
           and not any("may differ" in line for line in lines),
           f"exit {done.returncode}, {lines}")


def f_table_cut_and_padded():
    """One table cut to half and padded with zeros to its size, its times restored (a
    copy tool that checks only size and date): verify, report and export fail it."""
    folder = fresh("cutpad")
    path = folder / "daily.parquet"
    data, times = path.read_bytes(), path.stat()
    path.write_bytes(data[:len(data) // 2] + bytes(len(data) - len(data) // 2))
    os.utime(path, ns=(times.st_atime_ns, times.st_mtime_ns))
    done = [verify(folder), fp("report", "--quiet", folder),
            fp("export", "--csv", W / "cutpad_csv", folder)]
    record("a table cut and padded to its size, its times kept",
           [d.returncode for d in done] == [1, 2, 2] and "daily.parquet" in done[0].stdout
           and one_line(done[1]) and one_line(done[2]) and not (W / "cutpad_csv").exists(),
           f"exits {[d.returncode for d in done]}")


def f_result_renamed_odd():
    """A result folder renamed to hold spaces, a non-ASCII letter and CJK, and then to
    the decomposed (NFD) form of its name: verify and report by either spelling."""
    import unicodedata
    name = "Ergebnis ü 結果 2021"
    folder = W / name
    shutil.rmtree(folder, ignore_errors=True)
    shutil.copytree(W / "r0", folder)
    first = [verify(folder).returncode, fp("report", "--quiet", folder).returncode,
             verify(folder).returncode]
    decomposed = W / unicodedata.normalize("NFD", name)
    folder.rename(decomposed)
    as_typed = verify(folder)
    shutil.rmtree(decomposed, ignore_errors=True)
    record("a result renamed with spaces and non-ASCII letters, and to their NFD form",
           first == [0, 0, 0] and one_line(as_typed) and "NFD" in as_typed.stderr,
           f"exits {first}, NFD {as_typed.returncode} {_stderr_tail(as_typed, 80)}")


def f_export_into_occupied():
    """export --csv into a folder holding the user's files (and a hidden one), into an
    earlier CSV export, and --netcdf given a folder: refused in one line, nothing lost."""
    where = W / "occupied"
    shutil.rmtree(where, ignore_errors=True)
    (where / "user" / "sub").mkdir(parents=True)
    (where / "user" / "notes.txt").write_text("mine\n")
    (where / "user" / ".hidden").write_text("")
    assert fp("export", "--csv", where / "earlier", W / "r0").returncode == 0
    before = sorted(p.name for p in (where / "earlier").iterdir())
    done = [fp("export", "--csv", where / "user", W / "r0"),
            fp("export", "--csv", where / "earlier", W / "r1"),
            fp("export", "--netcdf", where / "user", W / "r0")]
    kept = (sorted(p.name for p in (where / "user").iterdir()) == [".hidden", "notes.txt",
                                                                  "sub"]
            and sorted(p.name for p in (where / "earlier").iterdir()) == before)
    record("export into a folder of the user's files, an earlier export, --netcdf a folder",
           all(one_line(d) for d in done) and kept and not leftovers(where),
           f"exits {[d.returncode for d in done]}, kept {kept}")


_LOAD_LOOP = """
import sys, time
import fluxpart
seen = {}
stop = time.time() + float(sys.argv[2])
while time.time() < stop:
    try:
        result = fluxpart.load(sys.argv[1])
        key = result.timeseries.shape
    except Exception as error:
        key = type(error).__name__
    seen[str(key)] = seen.get(str(key), 0) + 1
print(seen)
"""


def f_load_while_runs_write():
    """``fluxpart.load`` in a loop while runs of two seeds replace the folder in turn:
    every load a whole result (or one clear error), never a traceback of a mix."""
    folder = fresh("loadw")
    loop = subprocess.Popen([PY, "-c", _LOAD_LOOP, folder, "40"], env=ENV, cwd=W / "b",
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    codes = [fp("run", config, "--out", folder, "--quiet").returncode
             for config in ("seed1.toml", "site.toml") * 3]
    out, err = loop.communicate(timeout=120)
    record("fluxpart.load looped while runs replace the folder", codes == [0] * 6
           and "Error" not in out and "Traceback" not in err and "(1440" in out,
           f"runs {codes}, loads {out.strip()[:120]} {err.strip()[-80:]!r}")


def f_batch_kill9_moments():
    """kill -9 of a whole batch (2 local workers) at seeded moments while it replaces a
    network's results (every site's seed changed), each moment drawn within 3 s of the
    first site's staging folder appearing: each site folder holds the old result whole or
    the new one, never a mix; the network tables read or say to run the batch again; the
    next batch completes."""
    import random
    _seeded_net(4)
    assert fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET).returncode == 0
    old = W / "net_old"
    shutil.rmtree(old, ignore_errors=True)
    shutil.copytree(NET / "out", old)
    sites = sorted(p.name for p in old.iterdir() if (p / "manifest.json").is_file())
    for config in NET.glob("s*/s*.toml"):
        config.write_text(config.read_text().replace("seed = ", "seed = 1"))
    draw, snaps = random.Random(43), []
    for _ in range(6):
        stale = set(leftovers(NET / "out"))          # a killed batch's, swept at the start
        proc = subprocess.Popen([PY, "-m", "fluxpart", "batch", "sites.toml", "--quiet",
                                 "--workers", "2"], env=ENV, cwd=NET,
                                stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                start_new_session=True)
        deadline = time.time() + 300
        while time.time() < deadline and proc.poll() is None and not any(
                ".staging-" in name for name in set(leftovers(NET / "out")) - stale):
            time.sleep(0.005)
        try:
            proc.wait(timeout=draw.uniform(0, 3))
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
        time.sleep(1)
        snaps.append(([_old_or_whole(NET / "out" / s, old / s) for s in sites],
                      _network_read(NET / "out")))
    rerun = fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET)
    codes = sites_verify(NET / "out")
    mixed = [s for snap, net in snaps for s in snap + [net] if s == "mixed"]
    record("kill -9 of a 2-worker batch at seeded moments while it replaces results",
           not mixed and rerun.returncode == 0 and codes == [0] * 4
           and _net_sites(NET / "out") == 4 and not leftovers(NET / "out"),
           f"each kill's sites and network {snaps}, rerun {rerun.returncode}, verify {codes}")


def _network_read(out):
    """The sites the network tables of `out` hold, "again" where reading them says to
    run the batch again (a batch killed while writing them), else "mixed"."""
    done = subprocess.run([PY, "-c", "import sys; from fluxpart.batch import read_network; "
                                     "print(read_network(sys.argv[1]).site.nunique())",
                           str(out)], env=ENV, capture_output=True, text=True, timeout=120)
    if done.returncode == 0:
        return int(done.stdout)
    return "again" if "InputFileError" in done.stderr and "again" in done.stderr else "mixed"


def _old_or_whole(folder, old):
    """"old" where `folder` holds the result `old` whole, "new" where it is another
    result matching its own manifest, else "mixed" (or "missing")."""
    kind = _whole_kind(folder, old)
    if kind != "mixed":
        return "old" if kind == Path(old).name else kind
    done = subprocess.run([PY, "-c", "import sys; from fluxpart.resultdir import read_folder; "
                                     "read_folder(sys.argv[1])", str(folder)],
                          env=ENV, capture_output=True, text=True, timeout=120)
    return "new" if done.returncode == 0 else "mixed"

def f_table_cut_resealed():
    """A table cut and zero-padded to its size, and the manifest's SHA-256 of it and
    seal recomputed (a forger's tool): the folder matches its manifest, so the damage
    must be found when the table is read: verify exit 1 naming it, report, export and
    fluxpart.load one line (or an InputFileError), nothing written."""
    folder = fresh("cutseal")
    path = folder / "daily.parquet"
    data = path.read_bytes()
    path.write_bytes(data[:len(data) // 2] + bytes(len(data) - len(data) // 2))
    subprocess.run([PY, "-c", RESEAL, str(folder), "pass"], env=ENV, check=True)
    done = [verify(folder), fp("report", "--quiet", folder),
            fp("export", "--csv", W / "cutseal_csv", folder)]
    loaded = subprocess.run([PY, "-c", "import sys, fluxpart; fluxpart.load(sys.argv[1])",
                             folder], env=ENV, capture_output=True, text=True, timeout=120)
    record("a table cut and padded under a resealed manifest",
           done[0].returncode == 1 and "daily.parquet is unreadable" in done[0].stdout
           and one_line(done[1]) and one_line(done[2]) and not (W / "cutseal_csv").exists()
           and "InputFileError" in loaded.stderr and not (folder / "report").exists(),
           f"exits {[d.returncode for d in done]}, load {loaded.stderr.strip()[-70:]!r}")


def f_ctrl_c_pipeline():
    """Ctrl-C to ``run ... | tee log`` replacing a result (SIGINT to the terminal's whole
    process group, tee ended too, as its staging folder appears): one line, exit 130, the
    old result whole, nothing left."""
    folder = fresh("pipe_r")
    for name in ("pipe_err", "pipe_rc"):
        (W / name).unlink(missing_ok=True)
    command = (f"{PY} -m fluxpart run seed1.toml --out {folder} 2>{W / 'pipe_err'} "
               f"| tee {W / 'pipe_log'} >/dev/null; echo ${{PIPESTATUS[0]}} > {W / 'pipe_rc'}")
    proc = subprocess.Popen(["bash", "-c", command], cwd=W / "b", env=ENV,
                            start_new_session=True)
    deadline = time.time() + 120
    while time.time() < deadline and proc.poll() is None and not _entries(W, ".pipe_r.staging-"):
        time.sleep(0.005)
    os.killpg(proc.pid, signal.SIGINT)
    proc.wait(timeout=120)
    err = (W / "pipe_err").read_text()
    code = (W / "pipe_rc").read_text().strip() if (W / "pipe_rc").exists() else None
    kind = _whole_kind(folder, W / "r0", W / "r1")
    record("Ctrl-C to run | tee replacing a result", code == "130"
           and len([x for x in err.splitlines() if not x.startswith("warning:")]) == 1
           and kind in ("pipe_r", "r0", "r1") and not leftovers(W) and verify(folder).returncode == 0,
           f"exit {code}, {err.strip()[-90:]!r}, holds {kind}, left {leftovers(W)}")


def f_run_log_points_elsewhere():
    """A moved result whose run log (never hashed) was edited or copied from another run
    to point at a folder beside another file of the input's name: verify must not take
    that file (its SHA-256 is not the recorded one): one line asking for --input."""
    import json
    where = W / "logpoint"
    shutil.rmtree(where, ignore_errors=True)
    (where / "b").mkdir(parents=True)
    lines = (W / "b" / "tower.csv").read_text().splitlines(keepends=True)
    (where / "b" / "tower.csv").write_text("".join(lines[:1000]))
    shutil.copytree(W / "r0", where / "x" / "y" / "r0")
    log_path = where / "x" / "y" / "r0" / "run-log.json"
    log = json.loads(log_path.read_text())
    log["result_folder"] = str(where / "r0")
    log_path.write_text(json.dumps(log))
    done = verify(where / "x" / "y" / "r0")
    record("a moved result whose run log points beside another file of the input's name",
           one_line(done) and "--input" in done.stderr, f"exit {done.returncode} "
           f"{_stderr_tail(done, 80)}")


def f_netcdf_into_result():
    """``export --netcdf`` into the result folder itself: refused in one line (a file
    there would fail verify), verify then passes and a rerun replaces the folder."""
    folder = fresh("ncin")
    done = fp("export", "--netcdf", folder / "site.nc", folder)
    after = [verify(folder).returncode,
             fp("run", "site.toml", "--out", folder, "--quiet").returncode]
    record("export --netcdf into the result folder", one_line(done) and after == [0, 0]
           and not (folder / "site.nc").exists(),
           f"exit {done.returncode} {_stderr_tail(done, 80)}, verify and rerun {after}")


# ---------------------------------------------------------------- round faults44
def _net_read(out):
    """``read_network`` of `out` in a fresh process: (sites read, the warnings' text)."""
    done = subprocess.run([PY, "-W", "always", "-c", "import sys; from fluxpart.batch import "
                           "read_network; print(read_network(sys.argv[1]).site.nunique())",
                           str(out)], env=ENV, capture_output=True, text=True, timeout=120)
    return done.stdout.strip(), done.stderr


def _silent_service():
    """A TCP server on 127.0.0.1 that accepts and never answers: (process, address)."""
    code = ("import socket, time\ns = socket.socket(); s.bind(('127.0.0.1', 0)); s.listen(8)\n"
            "print(s.getsockname()[1], flush=True)\nheld = []\n"
            "while True:\n    held.append(s.accept()[0])\n")
    proc = subprocess.Popen([PY, "-c", code], stdout=subprocess.PIPE, text=True)
    return proc, f"tcp://127.0.0.1:{proc.stdout.readline().strip()}"


def f_batch_scheduler_addresses():
    """``--scheduler`` the address of a service that speaks no Dask (accepts and never
    answers), where nothing listens, without a port, of scheme http:// and tls:// without
    TLS settings: one ``error:`` line each, exit 2, within 30 s, no ``--out`` made."""
    _seeded_net(2)
    service, silent = _silent_service()
    for address in (silent, "tcp://127.0.0.1:1", "tcp://127.0.0.1", "http://127.0.0.1:8786",
                    "tls://127.0.0.1:8786"):
        shutil.rmtree(NET / "out", ignore_errors=True)
        began, name = time.time(), address.replace(silent, "tcp://(a silent service)")
        try:
            done = fp("batch", "sites.toml", "--scheduler", address, "--quiet", cwd=NET,
                      timeout=90)
        except subprocess.TimeoutExpired:
            record(f"batch --scheduler {name}", False, "hung (killed after 90 s)")
            continue
        record(f"batch --scheduler {name}",
               one_line(done) and time.time() - began < 30 and not (NET / "out").exists(),
               f"exit {done.returncode} after {time.time() - began:.0f} s, "
               f"out made {(NET / 'out').exists()}, {done.stderr.strip()[-160:]!r}")
    service.kill()
    service.wait()


def f_batch_all_or_some_fail():
    """Every site fails (latitude 200), then two of three (a setting unknown, the input a
    folder): exit 1, one line per cause, ``failures.parquet`` names them, the network
    tables hold the rest and their reader names those left out."""
    _seeded_net(3)
    for config in NET.glob("s*/s*.toml"):
        config.write_text(config.read_text().replace("latitude = 49.3", "latitude = 200"))
    every = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    read, said = _net_read(NET / "out")
    record("batch: every site fails", every.returncode == 1 and len(errlines(every)) == 1
           and "3 sites failed alike" in every.stderr and read == "0"
           and "FluxpartWarning" not in every.stderr
           and "leave out 3 site(s)" in said,
           f"exit {every.returncode}, {len(errlines(every))} error lines, network sites "
           f"{read}, reader's note {'leave out' in said}")
    _seeded_net(3)
    (NET / "s01" / "s01.toml").write_text((NET / "s01" / "s01.toml").read_text()
                                          + "bogus_setting = 1\n")
    (NET / "s02" / "tower.csv").unlink()
    (NET / "s02" / "tower.csv").mkdir()
    some = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    read, said = _net_read(NET / "out")
    record("batch: two of three sites fail (unknown setting, input a folder)",
           some.returncode == 1 and len(errlines(some)) == 2 and read == "1"
           and "'s01' (ConfigError), 's02' (InputFileError)" in said,
           f"exit {some.returncode}, {errlines(some)!r:.160}, network sites {read}, "
           f"reader's note {said.strip()[-120:]!r}")


DOOMED = OPEN_HOOK.replace("FOLDER", "doomed").replace(
    "ACTION", "threading.Timer(0.5, os.kill, (os.getpid(), signal.SIGKILL)).start()")
SPIN = OPEN_HOOK.replace("FOLDER", "hung").replace(
    "ACTION", "while True:  # pure Python holding the GIL\n            pass")


def _hooked(name, code):
    hook = W / name
    hook.mkdir(exist_ok=True)
    (hook / "sitecustomize.py").write_text(code)
    return dict(ENV, PYTHONPATH=f"{hook}:{ENV['PYTHONPATH']}")


def f_batch_worker_killed_every_try():
    """Each worker that computes one site is killed (SIGKILL 0.5 s after it opens the
    input; Dask's nanny restarts it and retries): that site fails with one line, the
    others are whole, no staging is left, a rerun processes only it."""
    _seeded_net(3)
    shutil.move(NET / "s01", NET / "doomed")
    done = fp("batch", "sites.toml", "--quiet", "--workers", "2", cwd=NET,
              env=_hooked("doom_hook", DOOMED), timeout=300)
    lines = errlines(done)
    left, codes = leftovers(NET / "out"), sites_verify(NET / "out")
    rerun = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    record("a worker killed on every try of one site", done.returncode == 1
           and len(lines) == 1 and "WorkerLostError" in lines[0] and not left
           and codes == [0, 0] and rerun.returncode == 0
           and "1 processed, 2 up to date" in rerun.stdout,
           f"exit {done.returncode}, {lines!r:.120}, left {left}, verify {codes}, rerun "
           f"{rerun.stdout.splitlines()[:1]}")


def f_batch_spinning_site():
    """A site stuck in a loop of pure Python (not waiting on a file) under
    ``--site-time-limit 0.2``: one line, the batch ends, no worker left running."""
    _seeded_net(3)
    shutil.move(NET / "s01", NET / "hung")
    began = time.time()
    proc = start("batch", "sites.toml", "--quiet", "--site-time-limit", "0.2", cwd=NET,
                 env=_hooked("spin_hook", SPIN))
    time.sleep(5)
    kids = descendants(proc.pid)
    out, err = proc.communicate(timeout=240)
    time.sleep(3)
    alive = [k for k in kids if Path(f"/proc/{k}").exists()]
    lines = [line for line in err.splitlines() if line.startswith("error:")]
    record("a site spinning in Python past --site-time-limit 0.2", proc.returncode == 1
           and len(lines) == 1 and "SiteTimeLimitError" in lines[0] and not alive
           and sites_verify(NET / "out") == [0, 0],
           f"exit {proc.returncode} after {time.time() - began:.0f} s, {lines!r:.100}, "
           f"processes left {alive}")


def f_batch_key_reassigned():
    """Keys follow the listing: ``north/tower.toml`` alone is ``tower``; with
    ``south/tower.toml`` both get their folder's name (the old ``tower`` named as no
    site's); south alone again is ``tower``, the folder of north's result: refused, not
    replaced nor mixed."""
    shutil.rmtree(NET, ignore_errors=True)
    for i, group in enumerate(("north", "south")):
        (NET / group).mkdir(parents=True)
        shutil.copy2(W / "b" / "tower.csv", NET / group / "tower.csv")
        (NET / group / "tower.toml").write_text((W / "b" / "site.toml").read_text().replace(
            "seed = 0", f"seed = {i}").replace("grassland", group))
    listing = {"one": '["north/tower.toml"]', "two": '["*/tower.toml"]',
               "south": '["south/tower.toml"]'}
    done = {}
    for name, sites in listing.items():
        (NET / "sites.toml").write_text(f'[batch]\nsites = {sites}\nout = "out"\n')
        done[name] = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    north = (NET / "out" / "tower" / "manifest.json").read_text()
    record("a site key reassigned by a changed listing", done["one"].returncode == 0
           and done["two"].returncode == 0 and "belong to no site" in done["two"].stdout
           and done["south"].returncode == 1 and "holds the result of site" in
           done["south"].stderr and "Quillmoor north" in north and _net_sites(NET / "out") == 0,
           f"exits {[d.returncode for d in done.values()]}, tower still north's "
           f"{'Quillmoor north' in north}, {errlines(done['south'])!r:.160}")


def f_batch_duplicate_spellings():
    """One config listed as ``s00/s00.toml``, ``./s00/s00.toml``, ``s00/../s00/s00.toml``,
    ``s00//s00.toml`` and by a glob: one site."""
    _seeded_net(2)
    (NET / "sites.toml").write_text('[batch]\nsites = ["s00/s00.toml", "./s00/s00.toml", '
                                    '"s00/../s00/s00.toml", "s00//s00.toml", "s0*/*.toml"]\n'
                                    'out = "out"\n')
    done = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    folders = sorted(p.name for p in (NET / "out").iterdir() if p.is_dir()
                     and not p.name.startswith("network"))
    record("one config listed in five spellings", done.returncode == 0
           and folders == ["s00", "s01"] and "2 site(s)" in done.stdout,
           f"exit {done.returncode}, folders {folders}")


def f_batch_verify_network_folder():
    """``verify`` of the batch output folder: one line naming it a batch output and what
    to give instead, exit 2; ``verify`` of each site's folder in place: bit-identical."""
    _seeded_net(2)
    done = fp("batch", "sites.toml", "--quiet", cwd=NET, timeout=300)
    whole = verify(NET / "out")
    record("verify of a batch output folder and of its sites in place",
           done.returncode == 0 and one_line(whole) and "batch output folder" in whole.stderr
           and sites_verify(NET / "out") == [0, 0],
           f"exit {whole.returncode}, {whole.stderr.strip()[:140]!r}")


def f_batch_worker_peak_memory():
    """One local worker computes the example network's 4 site-years (half-hourly and
    hourly): its peak resident memory (VmHWM) after each site; held under 0.5 GB and
    growing by less than 10 % after the first site (no leak between sites)."""
    out = W / "example_net"
    shutil.rmtree(out, ignore_errors=True)
    proc = start("batch", TREE / "examples" / "network.toml", "--workers", "1", "--out", out,
                 "--quiet", cwd=W)
    peaks, sites = {}, []
    while proc.poll() is None:
        for kid in descendants(proc.pid):
            try:
                status = Path(f"/proc/{kid}/status").read_text()
            except OSError:
                continue
            # a worker: forked from the fork server, so its command line is the server's
            if "forkserver" not in _cmdline(kid) or "forkserver" not in _cmdline(_parent(kid)):
                continue
            peak = int(status.split("VmHWM:")[1].split()[0]) // 1024
            peaks[kid] = max(peaks.get(kid, 0), peak)
        done = sorted(p.name for p in out.glob("*/manifest.json")) if out.exists() else []
        if len(done) > len(sites):
            sites = done
            peaks["after"] = peaks.get("after", []) + [max(
                (v for k, v in peaks.items() if k != "after"), default=0)]
        time.sleep(0.3)
    proc.communicate()
    after = peaks.get("after", [0])
    record("one worker's peak memory over 4 site-years", proc.returncode == 0
           and 100 < after[0] and max(after) < 512 and after[-1] < 1.1 * after[0],
           f"exit {proc.returncode}, peak after each site {after} MiB")


# ---------------------------------------------------------------- round faults45
NET45 = W / "net45"


def _three_sites(root):
    """Three sites of their own seeds (the third failing: its input missing) and a network
    file ``sites.toml`` (out = "out") in a fresh folder `root`; `root`."""
    shutil.rmtree(root, ignore_errors=True)
    for i in range(3):
        site = f"s{i:02d}"
        (root / site).mkdir(parents=True)
        if i < 2:
            shutil.copy2(W / "b" / "tower.csv", root / site / "tower.csv")
        text = (W / "b" / "site.toml").read_text().replace("seed = 0", f"seed = {i}")
        (root / site / f"{site}.toml").write_text(
            text.replace("Quillmoor grassland (fictional)", f"Quillmoor {site} (fictional)"))
    (root / "sites.toml").write_text('[batch]\nsites = ["*/s*.toml"]\nout = "out"\n')
    return root


def _net45():
    """A batch output folder of two computed sites (own seeds) and one the batch failed
    (its input missing), written once by a 1-worker local batch; its exit status."""
    out = NET45 / "out"
    if (out / "network.json").is_file():
        return 1
    _three_sites(NET45)
    return fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET45,
              timeout=600).returncode


def _net45_copy(name, *cp):
    """A copy of the round's network folder: ``cp -r`` (times and modes not kept) where
    `cp` gives its options, else shutil.copytree (times kept)."""
    target = NET45 / name
    shutil.rmtree(target, ignore_errors=True)
    if cp:
        subprocess.run(["cp", *cp, NET45 / "out", target], check=True)
    else:
        shutil.copytree(NET45 / "out", target, symlinks=True)
    return target


def _net45_with_scratch(name):
    """A copy of the round's network folder, an empty scratch folder for TMPDIR, and the
    copy's Parquet digests."""
    _net45()
    out = _net45_copy(name)
    scratch = W / f"tmp_{name}"
    shutil.rmtree(scratch, ignore_errors=True)
    scratch.mkdir()
    return out, scratch, _tree_digests(out)


def _tree_digests(folder):
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(Path(folder).rglob("*.parquet"))}


def f45_failures_table_edited():
    """An auditor's copy of a network whose failures.parquet was edited: the failed site
    relabelled as another name, and the table deleted. verify of the folder must not
    pass it as the batch's record (the seal holds its SHA-256)."""
    code = _net45()
    seen, held = [], code == 1
    relabel = ("import sys, pandas as pd; from fluxpart import batch; p = sys.argv[1]; "
               "t = pd.read_parquet(p).reset_index(); t['site'] = 'north-tower'; "
               "t = t[[c for c in t.columns if c != 'index']].set_index('site'); ")
    for case in ("relabelled", "rewritten by pandas", "deleted"):
        out = _net45_copy(f"fail_{case.split()[0]}")
        path = out / "failures.parquet"
        if case == "deleted":
            path.unlink()
        else:     # a forger's tool (fluxpart's own writer) and another tool's
            write = ("batch.write_table(t, p, batch._FAILURE_COLUMNS, 'failures')"
                     if case == "relabelled" else "t.to_parquet(p)")
            subprocess.run([PY, "-c", relabel + write, path], env=ENV, check=True)
        done = verify(out)
        ok = done.returncode == 1 and "failures.parquet" in done.stdout
        held = held and ok
        seen.append(f"{case}: exit {done.returncode} {done.stdout.splitlines()[:1]!r:.110}")
    record("verify of a network whose failures.parquet was edited or deleted", held,
           f"batch exit {code}; " + "; ".join(seen))


def f45_scheduler_empty():
    """``batch --scheduler "$ADDR"`` with ADDR unset: one error line naming the option,
    exit 2, no output folder; the machine's local cluster not started."""
    _net45()
    shutil.rmtree(NET45 / "empty_sched", ignore_errors=True)
    done = fp("batch", "sites.toml", "--quiet", "--scheduler", "", "--out", "empty_sched",
              cwd=NET45, timeout=600)
    record("batch --scheduler '' (an unset shell variable)",
           one_line(done) and "--scheduler" in done.stderr
           and not (NET45 / "empty_sched").exists(),
           f"exit {done.returncode}, {done.stderr.strip()[-120:]!r}, folder made "
           f"{(NET45 / 'empty_sched').exists()}")


def f45_network_copied_without_times():
    """``cp -r`` of a network folder (times and modes not kept): verify passes; a rerun of
    the batch into the copy skips every site and leaves every Parquet file byte-identical."""
    _net45()
    out = _net45_copy("cp_plain", "-r")
    before = _tree_digests(out)
    done = verify(out)
    rerun = fp("batch", "sites.toml", "--quiet", "--workers", "1", "--out", out, cwd=NET45,
               timeout=600)
    after = _tree_digests(out)
    record("a network folder copied with cp -r, verified and the batch rerun into it",
           done.returncode == 0 and rerun.returncode == 1 and before == after,
           f"verify {done.returncode}, rerun {rerun.returncode} "
           f"{rerun.stdout.strip().splitlines()[:1]!r:.90}, identical {before == after}")


def f45_network_moved():
    """A network folder moved two levels deeper (``mv``): verify of it passes (the seal
    names site folders relative to it)."""
    _net45()
    deeper = NET45 / "moved" / "2026" / "archive"
    shutil.rmtree(NET45 / "moved", ignore_errors=True)
    deeper.parent.mkdir(parents=True)
    shutil.copytree(NET45 / "out", NET45 / "to_move", symlinks=True)
    (NET45 / "to_move").rename(deeper)
    done = verify(deeper)
    record("verify of a network folder moved two levels deeper", done.returncode == 0,
           f"exit {done.returncode}, {(done.stdout + done.stderr).strip()[:110]!r}")


def f45_network_seal_bom_crlf():
    """network.json re-saved by a Windows editor (a UTF-8 BOM and CRLF): no content
    changed (a manifest so saved is read as written), so verify passes."""
    _net45()
    out = _net45_copy("seal_bom")
    path = out / "network.json"
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes().replace(b"\n", b"\r\n"))
    done = verify(out)
    said = done.stdout + done.stderr
    record("verify of a network whose network.json got a BOM and CRLF",
           done.returncode == 0 and "Traceback" not in said,
           f"exit {done.returncode}, {said.strip()[:140]!r}")


def f45_other_commands_on_network():
    """report, export --csv and diff given a batch output folder (not a result folder):
    one error line naming what to give instead, exit 2, nothing written."""
    _net45()
    out = _net45_copy("other_cmds")
    before = sorted(p.name for p in out.iterdir())
    shutil.rmtree(NET45 / "csv45", ignore_errors=True)
    steps = {"report": fp("report", "--quiet", out),
             "export": fp("export", "--csv", NET45 / "csv45", out),
             "diff": fp("diff", out, NET45 / "out")}
    after = sorted(p.name for p in out.iterdir())
    held = all(one_line(d) or d.returncode == 0 for d in steps.values()) \
        and before == after and (NET45 / "csv45").exists() == (steps["export"].returncode == 0)
    record("report, export and diff of a batch output folder", held,
           "; ".join(f"{k} {d.returncode} {d.stderr.strip()[-80:]!r}" for k, d in steps.items())
           + f"; entries changed {before != after}")


def f45_batch_resumed_config_changed():
    """A finished batch resumed after one site's config changed (its seed): that site is
    recomputed, the other skipped with its files byte-identical, the network resealed,
    verify passes."""
    _net45()
    out = _net45_copy("resumed")
    config = NET45 / "s01" / "s01.toml"
    original = config.read_text()
    keep = _tree_digests(out / "s00")
    try:
        config.write_text(original.replace("seed = 1", "seed = 7"))
        rerun = fp("batch", "sites.toml", "--quiet", "--workers", "1", "--out", out,
                   cwd=NET45, timeout=600)
        done = verify(out)
    finally:
        config.write_text(original)
    changed = _tree_digests(out / "s01") != _tree_digests(NET45 / "out" / "s01")
    record("a batch resumed after one site's config changed", rerun.returncode == 1
           and keep == _tree_digests(out / "s00") and changed and done.returncode == 0,
           f"rerun {rerun.returncode}, s00 identical {keep == _tree_digests(out / 's00')}, "
           f"s01 changed {changed}, verify {done.returncode}")


def f45_config_bom_crlf():
    """A site config saved by a Windows editor (UTF-8 BOM and CRLF) and one saved as
    UTF-16 ("Unicode" in Notepad): run the first to the same bytes as the original's
    tables; the second one error line naming the config, exit 2, no folder."""
    config = W / "b" / "bom45.toml"
    text = (W / "b" / "site.toml").read_text()
    config.write_bytes(b"\xef\xbb\xbf" + text.replace("\n", "\r\n").encode())
    shutil.rmtree(W / "bom45", ignore_errors=True)
    bom = fp("run", config, "--out", W / "bom45", "--quiet")
    utf16 = W / "b" / "utf16_45.toml"
    utf16.write_bytes(text.encode("utf-16"))
    shutil.rmtree(W / "utf16_45", ignore_errors=True)
    wide = fp("run", utf16, "--out", W / "utf16_45", "--quiet")
    same = bom.returncode == 0 and table_digests(W / "bom45") == table_digests(W / "r0")
    record("a site config with a BOM and CRLF, and one saved as UTF-16",
           same and one_line(wide) and "utf16_45.toml" in wide.stderr
           and not (W / "utf16_45").exists(),
           f"BOM+CRLF exit {bom.returncode} same tables {same}; UTF-16 exit {wide.returncode} "
           f"{wide.stderr.strip()[-110:]!r}")


def f45_sites_file_bom_crlf():
    """A network file (SITES.toml) saved with a BOM and CRLF: the batch reads it as the
    plain one (the same sites, skipped as up to date)."""
    _net45()
    out = _net45_copy("sites_bom")
    sites = NET45 / "sites_bom.toml"
    sites.write_bytes(b"\xef\xbb\xbf" + (NET45 / "sites.toml").read_bytes()
                      .replace(b"\n", b"\r\n"))
    before = _tree_digests(out)
    done = fp("batch", sites, "--quiet", "--workers", "1", "--out", out, cwd=NET45,
              timeout=600)
    record("a batch's network file with a BOM and CRLF", done.returncode == 1
           and "Traceback" not in done.stderr and before == _tree_digests(out),
           f"exit {done.returncode}, {done.stderr.strip()[-120:]!r}")


def f45_report_out_into_results():
    """``report R --out R`` (the result folder itself), ``--out`` another result folder
    and ``--out`` a batch's network folder: refused in one line, exit 2, every result
    still verified."""
    r = fresh("rep_self")
    other = fresh("rep_other", "r1")
    _net45()
    net = _net45_copy("rep_net")
    steps = {"itself": fp("report", "--quiet", r, "--out", r),
             "other result": fp("report", "--quiet", r, "--out", other),
             "network": fp("report", "--quiet", r, "--out", net)}
    checks = [verify(r).returncode, verify(other).returncode, verify(net).returncode]
    record("report --out the result itself, another result, a network folder",
           all(one_line(d) for d in steps.values()) and checks == [0, 0, 0],
           "; ".join(f"{k} {d.returncode} {d.stderr.strip()[-70:]!r}" for k, d in steps.items())
           + f"; verify after {checks}")


def f45_run_out_into_network():
    """``run --out`` a batch output folder, and ``batch --out`` a single result folder:
    one line, exit 2, both folders verified unchanged."""
    _net45()
    net = _net45_copy("run_into_net")
    r = fresh("batch_into_result")
    before = _tree_digests(net)
    into_net = fp("run", "site.toml", "--out", net, "--quiet")
    into_result = fp("batch", "sites.toml", "--quiet", "--workers", "1", "--out", r,
                     cwd=NET45, timeout=600)
    checks = [verify(net).returncode, verify(r).returncode]
    record("run --out a network folder; batch --out a result folder",
           one_line(into_net) and one_line(into_result) and checks == [0, 0]
           and before == _tree_digests(net),
           f"run {into_net.returncode} {into_net.stderr.strip()[-70:]!r}; batch "
           f"{into_result.returncode} {into_result.stderr.strip()[-70:]!r}; verify {checks}")


def f45_verify_network_stopped():
    """SIGTERM to ``verify`` of a network folder while it recomputes its first site:
    exit 143, one line, its scratch folder gone, the network untouched."""
    out, scratch, before = _net45_with_scratch("ver_stop")
    done = stop_when(["verify", "--quiet", out], signal.SIGTERM,
                     lambda: _entries(scratch, "fluxpart-verify-"),
                     env=dict(ENV, TMPDIR=str(scratch)))
    left = [p.name for p in _entries(scratch)]
    record("SIGTERM to verify of a network folder", one_line(done, 143) and not left
           and before == _tree_digests(out) and not leftovers(out),
           f"exit {done.returncode}, {done.stderr.strip()[-100:]!r}, left {left}")


def f45_verify_from_inside():
    """``verify .`` and ``report .`` run inside the result folder, and ``verify`` of the
    network with a trailing slash: all pass."""
    r = fresh("inside45")
    _net45()
    steps = [fp("verify", "--quiet", ".", cwd=r), fp("report", "--quiet", ".", cwd=r),
             fp("verify", "--quiet", str(NET45 / "out") + "/")]
    record("verify . and report . inside a result; a network given with a trailing /",
           [d.returncode for d in steps] == [0, 0, 0],
           f"exits {[d.returncode for d in steps]} {steps[0].stderr.strip()[-80:]!r}")


def f45_network_site_replaced_by_copy():
    """One site folder of a network replaced by its own ``cp -r`` copy (new inode and
    times, same bytes): verify of the network passes; by another seed's result of the
    same site: the seal is said not to hold, naming the site."""
    _net45()
    out = _net45_copy("site_copy")
    shutil.copytree(out / "s00", out / "s00.copy")
    shutil.rmtree(out / "s00")
    (out / "s00.copy").rename(out / "s00")
    same = verify(out)
    shutil.rmtree(out / "s01")
    shutil.copytree(W / "r1", out / "s01")
    other = verify(out)
    record("a network site replaced by its copy, and by another run",
           same.returncode == 0 and other.returncode == 1 and "s01" in other.stdout,
           f"copy {same.returncode}; other run {other.returncode} "
           f"{other.stdout.splitlines()[:1]!r:.100}")


def f45_batch_resumed_sites_changed():
    """A finished batch resumed after its network file changed: one site dropped (s01), one
    added (s03). The kept site is skipped byte-identical, the new one computed, the network
    tables hold the listed sites only, verify of the folder passes; the dropped site's folder
    is left as it was (its files the user's), and said so."""
    _net45()
    out = _net45_copy("resumed_sites")
    (NET45 / "s03").mkdir(exist_ok=True)
    shutil.copy2(W / "b" / "tower.csv", NET45 / "s03" / "tower.csv")
    (NET45 / "s03" / "s03.toml").write_text((NET45 / "s00" / "s00.toml").read_text()
                                            .replace("seed = 0", "seed = 3")
                                            .replace("Quillmoor s00", "Quillmoor s03"))
    sites = NET45 / "sites_changed.toml"
    sites.write_text('[batch]\nsites = ["s00/s00.toml", "s02/s02.toml", "s03/s03.toml"]\n')
    keep = _tree_digests(out / "s00")
    try:
        rerun = fp("batch", sites, "--workers", "1", "--out", out, cwd=NET45, timeout=600)
        done = verify(out)
    finally:
        shutil.rmtree(NET45 / "s03")
    listed = sorted(p.name.removeprefix("site=") for p in (out / "network_annual").iterdir())
    said = rerun.stdout + rerun.stderr
    record("a batch resumed after its network file dropped one site and added one",
           rerun.returncode == 1 and keep == _tree_digests(out / "s00")
           and listed == ["s00", "s03"] and done.returncode == 0 and (out / "s01").is_dir(),
           f"rerun {rerun.returncode}, network sites {listed}, verify {done.returncode}, s01 "
           f"named {'s01' in said}: {[ln for ln in said.splitlines() if 's01' in ln][:1]!r:.140}")


def _two_verifies(folder, scratch):
    """Two ``verify --quiet FOLDER`` at once with TMPDIR `scratch`: their exit statuses
    and what is left in `scratch`."""
    env = dict(ENV, TMPDIR=str(scratch))
    procs = [start("verify", "--quiet", folder, env=env) for _ in range(2)]
    codes = [p.wait(timeout=600) for p in procs]
    for p in procs:
        p.communicate()
    return codes, [p.name for p in scratch.iterdir()]


def f45_two_verifies_of_a_network():
    """Two ``verify`` of one network folder at once (two auditors on a shared disk): both
    exit 0, their scratch folders gone, the folder unchanged."""
    out, scratch, before = _net45_with_scratch("two_verifies")
    codes, left = _two_verifies(out, scratch)
    record("two verify of one network folder at once", codes == [0, 0] and not left
           and before == _tree_digests(out) and not leftovers(out),
           f"exits {codes}, left {left}")


# ---------------------------------------------------------------- round faults46
def _as_user(*args, user="nobody", env=None, cwd=None, timeout=300):
    """``fluxpart ARGS`` run as another user (setpriv(1): no write access to root's
    folders), HOME unset; None where setpriv is not there or refused."""
    setpriv = shutil.which("setpriv")
    if setpriv is None:
        return None
    import pwd
    entry = pwd.getpwnam(user)
    base = {k: v for k, v in (env or ENV).items() if k not in ("HOME", "XDG_CACHE_HOME",
                                                                 "XDG_CONFIG_HOME")}
    return subprocess.run([setpriv, f"--reuid={entry.pw_uid}", f"--regid={entry.pw_gid}",
                           "--clear-groups", PY, "-m", "fluxpart", *map(str, args)],
                          env=base, cwd=cwd or W / "b", capture_output=True, text=True,
                          timeout=timeout, errors="backslashreplace")


def _readable_by_all(path):
    """Make `path` and its parents searchable by every user (a scratch folder of
    :func:`tempfile.mkdtemp` is 0700)."""
    for part in [Path(path), *Path(path).parents]:
        if part.exists() and part.stat().st_uid == os.getuid():
            part.chmod(part.stat().st_mode | 0o055)


def _folders_for_others(name):
    """A folder `name` other users cannot write (root's, 0755) and ``tmp_open`` (1777)."""
    locked, writable = W / name, W / "tmp_open"
    for folder, mode in ((locked, 0o755), (writable, 0o1777)):
        folder.mkdir(exist_ok=True)
        folder.chmod(mode)
    return locked, writable


def _noise(done):
    return [line for line in done.stderr.splitlines() if not line.startswith("warning:")]


def f46_long_final_name():
    """``--out`` whose last name is 255 bytes (NAME_MAX, limits.h (m)) in ASCII and in 85
    three-byte letters, and 256: refused in one line naming the limit that leaves room
    for the staging and retired names beside it, nothing made; a name at that limit (ASCII
    and 3-byte letters): run, verify, report, export and a byte-identical rerun."""
    parent = W / "longname"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    seen, held = [], True
    for label, name in (("255 ASCII bytes", "r" * 255), ("85 letters of 3 bytes", "結" * 85),
                        ("256 bytes", "r" * 256)):
        done = fp("run", "site.toml", "--out", parent / name, "--quiet")
        # Path.exists() raises ENAMETOOLONG for a name past NAME_MAX: list the parent
        held = held and one_line(done) and name not in os.listdir(parent)
        seen.append(f"{label}: {done.returncode} {_stderr_tail(done, 60)}")
    for label, name in (("237 ASCII bytes", "r" * 237), ("79 letters of 3 bytes", "結" * 79)):
        out = parent / name
        steps = [fp("run", "site.toml", "--out", out, "--quiet"), verify(out),
                 fp("report", "--quiet", out), fp("export", "--csv", parent / "csv", out),
                 fp("run", "site.toml", "--out", out, "--quiet")]
        shutil.rmtree(parent / "csv", ignore_errors=True)
        held = held and all(s.returncode == 0 for s in steps) and \
            table_digests(out) == table_digests(W / "r0") and not leftovers(out)
        seen.append(f"{label}: exits {[s.returncode for s in steps]}")
    record("--out whose last name is 255 or 256 bytes (refused) and 237 (written)",
           held and not leftovers(parent), "; ".join(seen) + f"; left {leftovers(parent)}")


def f46_out_is_the_input_file():
    """``run --out tower.csv`` (the input itself, an existing file; a slip of the
    completion key): one line naming --out, exit 2, the input byte for byte as it was."""
    bundle = _bundle("out_input")
    before = (bundle / "tower.csv").read_bytes()
    done = fp("run", "site.toml", "--out", "tower.csv", "--quiet", cwd=bundle)
    record("run --out the input file itself", one_line(done) and "--out" in done.stderr
           and (bundle / "tower.csv").read_bytes() == before and not leftovers(bundle),
           f"exit {done.returncode}, {_stderr_tail(done, 140)}")


def f46_out_inside_input_folder():
    """``--out results`` inside the input's folder (results kept beside the data), twice:
    the rerun reads the same input (the result not taken for input), both byte-identical
    to the reference result, verify passes, a copy of the whole folder verified too."""
    bundle = _bundle("out_beside")
    runs = [fp("run", "site.toml", "--out", "results", "--quiet", cwd=bundle)
            for _ in range(2)]
    out = bundle / "results"
    copy = W / "out_beside_copy"
    shutil.rmtree(copy, ignore_errors=True)
    shutil.copytree(bundle, copy)
    checks = [verify(out).returncode, verify(copy / "results").returncode]
    record("--out inside the input's folder, run twice, folder copied",
           [r.returncode for r in runs] == [0, 0] and checks == [0, 0]
           and table_digests(out) == table_digests(W / "r0") and not leftovers(bundle),
           f"runs {[r.returncode for r in runs]}, verify {checks}, same "
           f"{table_digests(out) == table_digests(W / 'r0')}")


def f46_input_deleted_after_check():
    """``check`` passes, the input is deleted (a cleanup job), then ``run`` into a new
    folder and into an existing result: one line naming the input, exit 2; no new folder,
    the existing result verified unchanged."""
    bundle = _bundle("chk_gone")
    first = fp("check", "site.toml", cwd=bundle)
    (bundle / "tower.csv").unlink()
    new = W / "chk_gone_new"
    shutil.rmtree(new, ignore_errors=True)
    old = fresh("chk_gone_old")
    before = table_digests(old)
    runs = [fp("run", "site.toml", "--out", target, "--quiet", cwd=bundle)
            for target in (new, old)]
    record("the input deleted between check and run (new folder, existing result)",
           first.returncode in (0, 1) and all(one_line(r) and "tower.csv" in r.stderr
                                              for r in runs)
           and not new.exists() and table_digests(old) == before
           and verify(old).returncode == 0 and not leftovers(W),
           f"check {first.returncode}; runs {[r.returncode for r in runs]} "
           f"{_stderr_tail(runs[0], 110)}")


def f46_manifest_pretty_printed():
    """manifest.json opened in an editor and saved pretty-printed again (4-space indent,
    keys sorted, non-ASCII escaped, no final newline; and minified): the same content in
    other whitespace. verify and report pass, the seal holds."""
    import json
    seen, held = [], True
    for label, dump in (("4-space indent, sorted, escaped",
                         lambda m: json.dumps(m, indent=4, sort_keys=True, ensure_ascii=True)),
                        ("minified", lambda m: json.dumps(m, separators=(",", ":"),
                                                          ensure_ascii=False))):
        folder = fresh(f"pretty_{label.split()[0].replace('-', '')}")
        path = folder / "manifest.json"
        path.write_text(dump(json.loads(path.read_text(encoding="utf-8"))), encoding="utf-8")
        ver, rep = verify(folder), fp("report", "--quiet", folder)
        held = held and ver.returncode == 0 and rep.returncode == 0
        seen.append(f"{label}: verify {ver.returncode} {ver.stdout.strip()[:70]!r}, report "
                    f"{rep.returncode}")
    record("manifest.json re-saved pretty-printed or minified", held, "; ".join(seen))


def f46_table_renamed_bak():
    """A table renamed ``annual.parquet.bak`` (a user's backup before an edit, never put
    back), and a ``.bak`` copy left beside an intact table: verify exit 1 and report one
    line each (the folder holds other files than its manifest lists), naming the file
    that holds the table's recorded bytes and whether to rename it or move it out."""
    moved = fresh("bak_moved")
    (moved / "annual.parquet").rename(moved / "annual.parquet.bak")
    beside = fresh("bak_beside")
    shutil.copy2(beside / "daily.parquet", beside / "daily.parquet.bak")
    ver_moved, rep_moved = verify(moved), fp("report", "--quiet", moved)
    ver_beside, rep_beside = verify(beside), fp("report", "--quiet", beside)
    # the folder must hold exactly the files its manifest lists (a design rule kept):
    # both fail, and the words say which file holds the recorded bytes and what to do
    record("a table renamed .parquet.bak; a .bak copy beside an intact table",
           ver_moved.returncode == 1 and "rename it to annual.parquet" in ver_moved.stdout
           and one_line(rep_moved) and "rename it to annual.parquet" in rep_moved.stderr
           and ver_beside.returncode == 1 and "same bytes as daily.parquet" in ver_beside.stdout
           and one_line(rep_beside),
           f"renamed: verify {ver_moved.returncode} {ver_moved.stdout.strip()[:80]!r}, report "
           f"{rep_moved.returncode} {_stderr_tail(rep_moved, 70)}; beside: verify "
           f"{ver_beside.returncode}, report {rep_beside.returncode}")


def f46_two_verifies_one_result():
    """Two ``verify`` of one result folder at once, one TMPDIR (two auditors on a shared
    disk): both exit 0, no scratch left, the folder unchanged."""
    folder = fresh("two_ver46")
    before = table_digests(folder)
    scratch = W / "tmp_two_ver46"
    shutil.rmtree(scratch, ignore_errors=True)
    scratch.mkdir()
    codes, left = _two_verifies(folder, scratch)
    record("two verify of one result folder at once", codes == [0, 0] and not left
           and table_digests(folder) == before and not leftovers(folder),
           f"exits {codes}, left {left}")


def f46_verify_as_other_user():
    """An auditor verifying as another user (nobody): no write access to the result folder
    and HOME unset; with TMPDIR writable, then TMPDIR a folder it cannot write: verify
    exits 0, or one line naming the temporary folder and TMPDIR (exit 2); nothing written
    in the result either way."""
    folder = fresh("other_user")
    _readable_by_all(folder)
    for p in [folder, *folder.rglob("*")]:
        p.chmod(0o755 if p.is_dir() else 0o644)
    _readable_by_all(TREE)
    locked, writable = _folders_for_others("tmp_locked")
    before = sorted(p.name for p in folder.iterdir())
    open_tmp = _as_user("verify", "--quiet", folder, env=dict(ENV, TMPDIR=str(writable)),
                        cwd=writable)
    if open_tmp is None:
        record("verify as another user", True, "unprobed: no setpriv")
        return
    shut = _as_user("verify", "--quiet", folder, env=dict(ENV, TMPDIR=str(locked)),
                    cwd=writable)
    after = sorted(p.name for p in folder.iterdir())
    record("verify as another user without write access (TMPDIR writable / unwritable)",
           open_tmp.returncode == 0 and (shut.returncode == 0 or one_line(shut)
                                         and "TMPDIR" in shut.stderr)
           and before == after and not list(writable.iterdir()),
           f"TMPDIR open: {open_tmp.returncode} {_stderr_tail(open_tmp, 80)}; unwritable: "
           f"{shut.returncode} {_stderr_tail(shut, 130)}")


def f46_other_users_result():
    """Another user (nobody) given root's result folder: ``run --out`` it, ``report`` into
    it, ``export --csv`` beside it: one line each, exit 2, the run's naming the owner (not
    "chmod -R u+w", which only the owner may do); the result unchanged and verified."""
    folder = fresh("theirs46")
    _readable_by_all(folder)
    for p in [folder, *folder.rglob("*")]:
        p.chmod(0o755 if p.is_dir() else 0o644)
    _readable_by_all(W / "b")
    _, scratch = _folders_for_others("tmp_locked")
    before = table_digests(folder)
    steps = {"run": _as_user("run", W / "b" / "site.toml", "--out", folder, "--quiet",
                             cwd=scratch),
             "report": _as_user("report", "--quiet", folder, cwd=scratch),
             "export": _as_user("export", "--csv", W / "theirs46_csv", folder, cwd=scratch)}
    if steps["run"] is None:
        record("another user's result", True, "unprobed: no setpriv")
        return
    record("run, report and export by another user into root's result folder",
           all(one_line(d) for d in steps.values()) and "belongs to user" in
           steps["run"].stderr and table_digests(folder) == before
           and verify(folder).returncode == 0 and not leftovers(W),
           "; ".join(f"{k} {d.returncode} {d.stderr.strip()[-70:]!r}" for k, d in steps.items()))


def f46_report_mpl_cache_unwritable():
    """``report`` as another user whose HOME is unset and whose MPLCONFIGDIR is a folder
    it cannot write (matplotlib then makes a temporary cache and warns on stderr): the page
    and figures written as under a clean setup, stderr nothing but ``warning:`` lines."""
    base = _report_base()
    folder = fresh("mpl_user")
    _readable_by_all(folder)
    import pwd
    nobody = pwd.getpwnam("nobody")
    for p in [folder, *folder.rglob("*")]:
        os.chown(p, nobody.pw_uid, nobody.pw_gid)
    locked, scratch = _folders_for_others("mpl_locked")
    done = _as_user("report", "--quiet", folder, cwd=scratch,
                    env=dict(ENV, MPLCONFIGDIR=str(locked), TMPDIR=str(scratch)))
    if done is None:
        record("report with MPLCONFIGDIR unwritable", True, "unprobed: no setpriv")
        return
    record("report as another user, MPLCONFIGDIR unwritable and HOME unset",
           done.returncode == 0 and not _noise(done) and _same_report(folder, base),
           f"exit {done.returncode}, same {_same_report(folder, base)}, stderr "
           f"{_noise(done)[:2]!r:.200}")


def f46_turkish_locale():
    """LANG and LC_ALL tr_TR.UTF-8 (a dotless ı: "I".lower() is "ı" in C's towlower
    there) for run, report and export --csv: tables byte-identical to the reference, the
    CSV files byte-identical to an export under C.UTF-8. Unprobed where the locale is not
    installed (``locale -a``)."""
    listed = subprocess.run(["locale", "-a"], capture_output=True, text=True).stdout.lower()
    if "tr_tr.utf8" not in listed:
        record("run, report and export under tr_TR.UTF-8", True, "unprobed: no tr_TR locale")
        return
    env = dict(ENV, LANG="tr_TR.UTF-8", LC_ALL="tr_TR.UTF-8")
    out = W / "turkish"
    shutil.rmtree(out, ignore_errors=True)
    run = fp("run", "site.toml", "--out", out, "--quiet", env=env)
    rep = fp("report", "--quiet", out, env=env)
    csvs = {}
    for label, extra in (("tr", env), ("c", dict(ENV, LANG="C.UTF-8", LC_ALL="C.UTF-8"))):
        target = W / f"turkish_csv_{label}"
        shutil.rmtree(target, ignore_errors=True)
        fp("export", "--csv", target, out, env=extra)
        csvs[label] = {p.name: p.read_bytes() for p in sorted(target.glob("*"))
                       if p.is_file()}
    same = table_digests(out) == table_digests(W / "r0")
    record("run, report and export --csv under tr_TR.UTF-8",
           run.returncode == 0 and rep.returncode == 0 and same and csvs["tr"]
           and csvs["tr"] == csvs["c"] and verify(out).returncode == 0,
           f"run {run.returncode}, report {rep.returncode} {_stderr_tail(rep, 60)}, tables "
           f"same {same}, CSV same {csvs['tr'] == csvs['c']} ({len(csvs['tr'])} files)")


def f46_nice_two_threads_far_zone():
    """``nice -n 10`` with OMP/OpenBLAS at 2 threads, TZ=Pacific/Chatham (+12:45) and
    TZ=America/Adak (-10/-9 with DST) alone (no locale set): every table byte-identical to
    the reference run's."""
    seen, held = [], True
    for label, extra, prefix in (
            ("nice -n 10, 2 threads", dict(OMP_NUM_THREADS="2", OPENBLAS_NUM_THREADS="2"),
             ["nice", "-n", "10"]),
            ("TZ=Pacific/Chatham", dict(TZ="Pacific/Chatham"), []),
            ("TZ=America/Adak", dict(TZ="America/Adak"), [])):
        out = W / f"bytes46_{len(seen)}"
        shutil.rmtree(out, ignore_errors=True)
        done = subprocess.run([*prefix, PY, "-m", "fluxpart", "run", "site.toml", "--out",
                               str(out), "--quiet"], env=dict(ENV, **extra), cwd=W / "b",
                              capture_output=True, text=True)
        same = done.returncode == 0 and table_digests(out) == table_digests(W / "r0")
        held = held and same
        seen.append(f"{label}: {done.returncode} same {same}")
    record("nice with 2 threads, far time zones: tables byte-identical", held, "; ".join(seen))


def f46_batch_zero_byte_files():
    """A network file whose site pattern matches a folder of 0-byte files (configs and
    inputs cut to nothing by a failed sync): every site fails (a bad site config fails its
    site, not the batch), exit 1, each named as an empty file, no traceback; the folder
    holds the failures table."""
    root = W / "zero46"
    shutil.rmtree(root, ignore_errors=True)
    for i in range(2):
        (root / f"z{i}").mkdir(parents=True)
        (root / f"z{i}" / f"z{i}.toml").write_bytes(b"")
        (root / f"z{i}" / "tower.csv").write_bytes(b"")
    (root / "sites.toml").write_text('[batch]\nsites = ["z*/z*.toml"]\nout = "out"\n')
    started = time.time()
    done = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=root, timeout=600)
    took = time.time() - started
    named = [line for line in errlines(done) if "is empty (0 bytes" in line]
    record("a batch whose configs and inputs are 0-byte files",
           done.returncode == 1 and len(named) == 2 and "Traceback" not in done.stderr
           and (root / "out" / "failures.parquet").is_file(),
           f"exit {done.returncode} in {took:.1f} s, {_stderr_tail(done, 140)}, folder "
           f"made {(root / 'out').exists()}")


def f46_sigint_verify():
    """Ctrl-C (SIGINT) to ``verify`` of a result folder as its scratch folder appears:
    exit 130, one line, the scratch gone, the folder unchanged and verified after."""
    folder = fresh("int_ver46")
    before = table_digests(folder)
    scratch = W / "tmp_int46"
    shutil.rmtree(scratch, ignore_errors=True)
    scratch.mkdir()
    done = stop_when(["verify", "--quiet", folder], signal.SIGINT,
                     lambda: _entries(scratch, "fluxpart-verify-"),
                     env=dict(ENV, TMPDIR=str(scratch)))
    left = [p.name for p in _entries(scratch)]
    record("Ctrl-C to verify as its scratch folder appears", one_line(done, 130)
           and not left and table_digests(folder) == before
           and verify(folder).returncode == 0,
           f"exit {done.returncode}, {_stderr_tail(done, 100)}, left {left}")


def f46_mtimes_rounded():
    """A result copied to a file system that rounds times to 2 s (FAT, exFAT's default)
    and dated so the manifest is older than its tables, the run log newest: verify and
    report pass (a result is judged by its content, never by its dates)."""
    copy = W / "fat46"
    shutil.rmtree(copy, ignore_errors=True)
    shutil.copytree(W / "r0", copy)
    for p in copy.rglob("*"):
        st = p.stat()
        os.utime(p, ns=(st.st_atime_ns, st.st_mtime_ns // 2_000_000_000 * 2_000_000_000))
    now = time.time()
    os.utime(copy / "manifest.json", (now - 86400, now - 86400))
    os.utime(copy / "run-log.json", (now + 4, now + 4))
    ver, rep = verify(copy), fp("report", "--quiet", copy)
    record("a result with times rounded to 2 s, the manifest older than its tables",
           ver.returncode == 0 and rep.returncode == 0,
           f"verify {ver.returncode} {ver.stdout.strip()[:60]!r}, report {rep.returncode}")


def f46_out_below_link_loop():
    """``--out loop/out`` where ``loop`` is a link to itself (ELOOP), and ``--out`` a
    link to a link to itself: one line, exit 2, nothing made."""
    parent = W / "loop46"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    (parent / "loop").symlink_to("loop")
    (parent / "again").symlink_to("loop")
    runs = [fp("run", "site.toml", "--out", parent / "loop" / "out", "--quiet"),
            fp("run", "site.toml", "--out", parent / "again", "--quiet")]
    record("--out below a link to itself, and a link to that link",
           all(one_line(r) for r in runs)
           and sorted(p.name for p in parent.iterdir()) == ["again", "loop"],
           "; ".join(f"{r.returncode} {_stderr_tail(r, 90)}" for r in runs))


def f46_network_site_input_missing():
    """verify of a network copied without one site's input (s00's tower.csv gone, its run
    log's places of the run removed): every other site still verified and reported, one
    error line naming s00 and where its input goes, exit 2 (faults45 left verify stopping
    at the first such site)."""
    import json
    _net45()
    root = NET45 / "lost_input"
    shutil.rmtree(root, ignore_errors=True)
    root.mkdir()
    out = root / "out"
    shutil.copytree(NET45 / "out", out)
    for site in ("s00", "s01", "s02"):
        shutil.copytree(NET45 / site, root / site)
    (root / "s00" / "tower.csv").unlink()
    log = out / "s00" / "run-log.json"
    record_ = json.loads(log.read_text())
    for key in ("absolute_paths", "result_folder"):
        record_.pop(key, None)
    log.write_text(json.dumps(record_))
    done = fp("verify", out)
    site_lines = [line.split()[:2] for line in done.stdout.splitlines()
                  if line.startswith("  ") and not line.startswith("    ")]
    record("verify of a network with one site's input missing",
           one_line(done) and "s00" in done.stderr and ["s01", "bit-identical"] in site_lines,
           f"exit {done.returncode}, sites {site_lines}, {_stderr_tail(done, 100)}")


def f46_diff_residue():
    """diff of a result and its copy whose annual part that is zero holds a float residue
    (9.46e-23 g C m-2, resealed by a forger's tool as another run would write it): the
    part is equal within rounding, listed as such, not a move of -100 %."""
    import pandas as pd
    folder = fresh("residue46")
    annual = pd.read_parquet(folder / "annual.parquet")
    zero = [c for c in annual.columns if pd.api.types.is_float_dtype(annual[c])
            and (annual[c] == 0).all() and "uncertainty" in c]
    if not zero:
        record("diff of a zero part against a float residue", True,
               "unprobed: no zero uncertainty part in the annual table")
        return
    edit = ("import pyarrow.parquet as pq, pyarrow as pa, numpy as np\n"
            f"p = d / 'annual.parquet'; t = pq.read_table(p); i = t.schema.get_field_index("
            f"{zero[0]!r})\n"
            "c = pa.array(np.full(t.num_rows, 9.46e-23))\n"
            "pq.write_table(t.set_column(i, t.schema.field(i), c), p)\n")
    subprocess.run([PY, "-c", RESEAL, folder, edit], env=ENV, check=True)
    done = fp("diff", W / "r0", folder)
    moved = [line for line in done.stdout.splitlines() if zero[0] in line
             and "e-23" in line]
    record("diff of a zero annual part against a float residue", not moved
           and "within rounding" in done.stdout and zero[0] in done.stdout,
           f"exit {done.returncode}, column {zero[0]}, moves shown {moved[:1]!r:.100}")


# ------------------------------------------------------------------ round network56
NET56 = W / "net56"


def _net56_sources(name):
    """The three sites of :func:`_three_sites` in a fresh folder `name` of the round, no
    output yet; the folder."""
    return _three_sites(NET56 / name)


def f56_verify_batch_stopped_before_its_seal():
    """SIGTERM to a first batch once a site folder is written, before network.json exists:
    `verify` of the folder is one error line naming its site folders and "run the batch
    again" (it said only "not a fluxpart result folder"), exit 2; the rerun skips the
    written site and the network then verifies (exit 0)."""
    root = _net56_sources("stopped")
    out = root / "out"
    done = stop_when(["batch", root / "sites.toml", "--quiet", "--workers", "2"],
                     signal.SIGTERM, lambda: any(p.name.startswith("s")
                                                 for p in _entries(out)))
    sealed = (out / "network.json").exists()
    seen = fp("verify", "--quiet", out)
    rerun = fp("batch", root / "sites.toml", "--quiet", "--workers", "2", timeout=600)
    after = fp("verify", "--quiet", out, timeout=600)
    record("verify of a batch folder stopped before its first seal, then the rerun",
           done.returncode == 143 and (sealed or (one_line(seen) and "run the batch again"
                                                  in seen.stderr))
           and rerun.returncode == 1 and "up to date" in rerun.stdout
           and after.returncode == 0 and not leftovers(out),
           f"stop exit {done.returncode}, sealed {sealed}, verify exit {seen.returncode} "
           f"{seen.stderr.strip()[-90:]!r}, rerun exit {rerun.returncode}, verify after "
           f"{after.returncode}")


def f56_one_or_two_workers_same_bytes():
    """The same network on 1 and on 2 local workers: every site's tables and manifest,
    the network datasets, failures.parquet and network.json byte for byte the same (only
    run-log.json, the run's own log, may differ)."""
    digests, root = [], _net56_sources("workers")
    for workers in ("1", "2"):    # one source folder: failures.parquet names the config
        out = root / f"out{workers}"
        done = fp("batch", "sites.toml", "--quiet", "--workers", workers, "--out", out,
                  cwd=root, timeout=600)
        digests.append((done.returncode, {
            p.relative_to(out).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(out.rglob("*"))
            if p.is_file() and p.name != "run-log.json" and not p.name.endswith(".lock")}))
    (code1, one), (code2, two) = digests
    differ = sorted(k for k in one.keys() | two.keys() if one.get(k) != two.get(k))
    record("a network on 1 and on 2 workers", code1 == code2 == 1 and len(one) > 20
           and not differ, f"exits {code1}/{code2}, {len(one)} files, differ {differ[:4]}")


# ------------------------------------------------------------------ round faults47
def _said(done, width=140):
    return repr((done.stdout + done.stderr).strip()[:width])


def _verified(folder, *extra, env=None):
    """verify's exit status and whether it printed no traceback."""
    done = verify(folder, *extra, env=env)
    return done.returncode, "Traceback" not in done.stdout + done.stderr, done


def f47_rsync_copies():
    """A result copied with ``rsync -a`` (times and modes kept) and ``rsync -r`` (neither
    kept, as onto a share): verify and report pass on each copy."""
    if shutil.which("rsync") is None:
        record("rsync -a / -r copies of a result", False, "unprobed: no rsync")
        return
    seen = []
    for option, name in (("-a", "rs_a"), ("-r", "rs_r")):
        shutil.rmtree(W / name, ignore_errors=True)
        subprocess.run(["rsync", option, f"{W / 'r0'}/", f"{W / name}/"], check=True)
        seen.append((verify(W / name).returncode, fp("report", "--quiet", W / name).returncode))
    record("rsync -a / -r copies of a result: verify, report", seen == [(0, 0), (0, 0)],
           f"(verify, report) {seen}")


def f47_rsync_cut_short():
    """An ``rsync`` stopped mid-copy leaves its temporary file ``.NAME.XXXXXX`` (a hidden
    dot, six random letters; rsync(1) --temp-dir, (m)) holding the first bytes of a
    table: verify fails naming the file and what it is."""
    folder = fresh("rs_cut")
    part = folder / ".annual.parquet.Xy12Ab"
    part.write_bytes((W / "r0" / "annual.parquet").read_bytes()[:3000])
    code, clean, done = _verified(folder)
    record("an interrupted rsync's temporary file in a result", code == 1 and clean
           and part.name in done.stdout and "copy" in done.stdout.split(part.name, 1)[1][:200],
           f"exit {code}, {done.stdout.strip()[:260]!r}")


def f47_tar_touch():
    """A result through ``tar`` extracted with ``--touch`` and ``--no-same-permissions``
    (every time now, the extracting user's umask): verify and report pass."""
    box = W / "tar47"
    shutil.rmtree(box, ignore_errors=True)
    box.mkdir()
    subprocess.run(["tar", "-C", W, "-cf", box / "r.tar", "r0"], check=True)
    subprocess.run(["tar", "--touch", "--no-same-permissions", "-xf", "r.tar"], cwd=box,
                   check=True)
    seen = (verify(box / "r0").returncode, fp("report", "--quiet", box / "r0").returncode)
    record("a result through tar --touch --no-same-permissions", seen == (0, 0),
           f"(verify, report) {seen}")


def f47_file_manager_litter():
    """Finder's ``.DS_Store``, AppleDouble ``._annual.parquet``, Explorer's
    ``Thumbs.db`` and ``desktop.ini`` dropped in a result by a file browser: verify 0
    (they cost nothing when the folder is replaced)."""
    folder = fresh("litter47")
    for name, data in ((".DS_Store", b"\0\0\0\1Bud1"), ("._annual.parquet", b"\0\5\26\7"),
                       ("Thumbs.db", b"x"), ("desktop.ini", b"[.ShellClassInfo]\r\n")):
        (folder / name).write_bytes(data)
    code, clean, done = _verified(folder)
    rerun = fp("run", "site.toml", "--out", folder, "--quiet")
    record("file browsers' litter in a result: verify, run over it", code == 0 and clean
           and rerun.returncode == 0, f"verify {code}, rerun {rerun.returncode} "
           f"{_stderr_tail(rerun)}")


def f47_nested_copy():
    """``cp -r r0 dest`` done twice: the second copy lands inside the first (dest/r0/).
    verify of dest fails, naming r0/ and saying it holds a result."""
    dest = W / "nest47"
    shutil.rmtree(dest, ignore_errors=True)
    for _ in range(2):
        subprocess.run(["cp", "-r", W / "r0", dest], check=True)
    code, clean, done = _verified(dest)
    record("a result copied twice with cp -r (a copy inside the copy)", code == 1 and clean
           and "r0/" in done.stdout and "result folder of its own" in done.stdout,
           f"exit {code}, {done.stdout.strip()[:260]!r}")


def f47_sync_conflict_copies():
    """A sync client's conflicting copies of a table: Dropbox's "NAME (conflicted copy
    DATE).parquet" and Syncthing's "NAME.sync-conflict-DATE-TIME-ID.parquet" (their
    documentation (m)), each another run's table: verify fails naming the file."""
    seen = []
    for label, name in (("dropbox", "annual (conflicted copy 2026-12-05).parquet"),
                        ("syncthing", "annual.sync-conflict-20261205-101500-ABCDEFG.parquet")):
        folder = fresh(f"sync47_{label}")
        shutil.copy2(W / "r1" / "annual.parquet", folder / name)
        code, clean, done = _verified(folder)
        seen.append((label, code, clean and name in done.stdout))
    record("a sync client's conflicting copy of a table in a result",
           all(code == 1 and named for _, code, named in seen), f"{seen}")


def f47_manifest_case_changed():
    """MANIFEST.JSON (a copy through a tool that upper-cases names): verify and report
    name the rename, one line each."""
    folder = fresh("case47")
    (folder / "manifest.json").rename(folder / "MANIFEST.JSON")
    done = [verify(folder), fp("report", "--quiet", folder)]
    record("manifest.json renamed MANIFEST.JSON: verify, report",
           all(one_line(d) and "MANIFEST.JSON" in d.stderr for d in done),
           f"exits {[d.returncode for d in done]}, {_stderr_tail(done[0])}")


def f47_half_hour_zone_c_locale_umask():
    """run under TZ=Asia/Kolkata (+05:30), LC_ALL=C and umask 077: tables byte-identical
    to the run under the probe's environment; verify of r0 under the same environment."""
    env = dict(ENV, TZ="Asia/Kolkata", LC_ALL="C", LANG="C")
    out = W / "kolkata47"
    shutil.rmtree(out, ignore_errors=True)
    done = subprocess.run(["sh", "-c", 'umask 077 && exec "$0" -m fluxpart "$@"', PY, "run",
                           "site.toml", "--out", out, "--quiet"], env=env, cwd=W / "b",
                          capture_output=True, text=True, timeout=300)
    code, clean, _ = _verified(W / "r0", env=env)
    record("run and verify under TZ=Asia/Kolkata, LC_ALL=C, umask 077",
           done.returncode == 0 and table_digests(out) == table_digests(W / "r0")
           and code == 0, f"run {done.returncode}, verify {code}, same bytes "
           f"{table_digests(out) == table_digests(W / 'r0')}")


def f47_python_flags():
    """PYTHONWARNINGS=error (a site's hardened environment) and PYTHONOPTIMIZE=2 (asserts
    and docstrings stripped): run, verify, report, export byte-identical / 0."""
    seen = {}
    for label, extra in (("warnings error", {"PYTHONWARNINGS": "error"}),
                         ("optimize 2", {"PYTHONOPTIMIZE": "2"})):
        env = dict(ENV, **extra)
        out = W / f"pyflags47_{label.split()[0]}"
        shutil.rmtree(out, ignore_errors=True)
        shutil.rmtree(out.with_name(out.name + "_csv"), ignore_errors=True)
        codes = [fp("run", "site.toml", "--out", out, "--quiet", env=env).returncode,
                 verify(out, env=env).returncode,
                 fp("report", "--quiet", out, env=env).returncode,
                 fp("export", "--csv", out.with_name(out.name + "_csv"), out,
                    env=env).returncode]
        seen[label] = (codes, table_digests(out) == table_digests(W / "r0"))
    record("PYTHONWARNINGS=error and PYTHONOPTIMIZE=2: run, verify, report, export",
           all(codes == [0, 0, 0, 0] and same for codes, same in seen.values()), f"{seen}")


def _own_copy(name):
    """A bundle and its result of its own under W/name (b/, r/): for faults that edit
    the input or the site config after the run."""
    base = W / name
    shutil.rmtree(base, ignore_errors=True)
    (base / "b").mkdir(parents=True)
    for file in ("site.toml", "tower.csv"):
        shutil.copy2(W / "b" / file, base / "b" / file)
    assert fp("run", "site.toml", "--out", base / "r", "--quiet", cwd=base / "b").returncode == 0
    return base


def f47_config_edited_after_run():
    """The site config after the run: a comment added, re-saved with CRLF by a git
    checkout, renamed, deleted. verify passes each with a note (the manifest keeps the
    config's text; the file only finds the input)."""
    seen = []
    for label, edit in (("comment", lambda p: p.write_text(p.read_text() + "# checked\n")),
                        ("crlf", lambda p: p.write_bytes(p.read_bytes().replace(b"\n",
                                                                                 b"\r\n"))),
                        ("renamed", lambda p: p.rename(p.with_name("site-2021.toml"))),
                        ("deleted", lambda p: p.unlink())):
        base = _own_copy(f"cfg47_{label}")
        edit(base / "b" / "site.toml")
        done = fp("verify", base / "r")
        seen.append((label, done.returncode, "note: site config" in done.stdout))
    record("the site config edited, re-saved CRLF, renamed, deleted after the run",
           all(code == 0 and noted for _, code, noted in seen), f"{seen}")


def f47_input_touched():
    """The input touched (mtime 2030, bytes unchanged): verify 0 and run again
    byte-identical."""
    base = _own_copy("touch47")
    stamp = time.mktime((2030, 1, 1, 0, 0, 0, 0, 0, 0))
    os.utime(base / "b" / "tower.csv", (stamp, stamp))
    code, clean, _ = _verified(base / "r")
    again = fp("run", "site.toml", "--out", base / "r", "--quiet", cwd=base / "b")
    record("the input touched (dated 2030, bytes unchanged): verify, rerun",
           code == 0 and again.returncode == 0
           and table_digests(base / "r") == table_digests(W / "r0"),
           f"verify {code}, rerun {again.returncode}")


def f47_input_compressed_after_run():
    """The input compressed after the run to save room (``gzip tower.csv``, ``xz``,
    ``bzip2``: the recorded name gone, NAME.gz beside it): verify finds it, checks its
    unpacked bytes against the recorded SHA-256 and passes with a note."""
    seen = []
    for tool, suffix in (("gzip", ".gz"), ("xz", ".xz"), ("bzip2", ".bz2")):
        if shutil.which(tool) is None:
            continue
        base = _own_copy(f"packed47_{tool}")
        subprocess.run([tool, base / "b" / "tower.csv"], check=True)
        done = fp("verify", base / "r")
        seen.append((tool, done.returncode, f"tower.csv{suffix}" in done.stdout))
    record("the input compressed after the run (gzip, xz, bzip2)",
           bool(seen) and all(code == 0 and named for _, code, named in seen), f"{seen}")


def f47_input_compressed_and_changed():
    """As above, but the compressed file holds other data (another seed's input): verify
    does not take it (exit 2, naming the recorded file), nothing recomputed."""
    base = _own_copy("packed47_other")
    other = base / "b" / "tower.csv"
    text = other.read_text().splitlines(keepends=True)
    other.write_text("".join(text[:-48]))       # a day fewer: another download
    subprocess.run(["gzip", other], check=True)
    done = fp("verify", base / "r")
    record("the input replaced by another file's gzip after the run", one_line(done)
           and "tower.csv" in done.stderr, f"exit {done.returncode}, {_stderr_tail(done)}")


def f83_bomb_beside_input():
    """The input gone and a decompression bomb under its name + .gz beside it (1 GiB of
    zeros, 4.7 MB compressed): verify must not take it (exit 2, one error line) and
    must not hold it in memory (it was unpacked whole and re-saved in memory several
    times over: 2.0 GB for 300 MB of zeros; round review83). The peak memory of the
    verify process is read by a wrapper process whose only child it is."""
    import zlib

    base = _own_copy("bomb83")
    (base / "b" / "tower.csv").unlink()
    packer = zlib.compressobj(1, zlib.DEFLATED, 31)      # 31: a gzip wrapper (zlib docs)
    zeros = bytes(2**24)
    with open(base / "b" / "tower.csv.gz", "wb") as out:
        for _ in range(64):
            out.write(packer.compress(zeros))
        out.write(packer.flush())
    wrapper = ("import resource, subprocess, sys\n"
               "done = subprocess.run(sys.argv[1:], capture_output=True, text=True)\n"
               "sys.stderr.write(done.stderr)\n"
               "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)\n"
               "sys.exit(done.returncode)")
    started = time.time()
    done = subprocess.run([PY, "-c", wrapper, PY, "-m", "fluxpart", "verify", base / "r"],
                          env=ENV, cwd=base / "b", capture_output=True, text=True,
                          timeout=600)
    peak_mb = int(done.stdout.split()[-1]) / 1024 if done.stdout.split() else float("nan")
    record("a decompression bomb named as the gone input's .gz", one_line(done)
           and peak_mb < 1024, f"exit {done.returncode}, peak {peak_mb:.0f} MB, "
           f"{time.time() - started:.1f} s, {_stderr_tail(done)}")


def _wait_for(check, seconds=120):
    deadline = time.time() + seconds
    while time.time() < deadline and not check():
        time.sleep(0.01)
    return check()


def f47_stopped_lock_holder():
    """A run suspended (SIGSTOP, as Ctrl-Z in another terminal) while it holds the
    folder's lock; a second run into the folder waits, naming the holder's process and
    that it is stopped; after SIGCONT both finish and the folder holds one whole result."""
    out = fresh("stopped47")
    first = start("run", "seed1.toml", "--out", out, "--quiet")
    _wait_for(lambda: _entries(W, ".stopped47.staging-"))
    first.send_signal(signal.SIGSTOP)
    second = start("run", "site.toml", "--out", out, "--quiet")
    time.sleep(8)                           # the second run meets the lock and waits
    first.send_signal(signal.SIGCONT)
    out1, err1 = first.communicate(timeout=300)
    out2, err2 = second.communicate(timeout=300)
    whole = table_digests(out) in (table_digests(W / "r0"), table_digests(W / "r1"))
    named = str(first.pid) in err2 and "stopped" in err2
    record("a run suspended with the lock, a second run into the folder",
           first.returncode == 0 and second.returncode == 0 and whole and named
           and verify(out).returncode == 0 and not leftovers(W),
           f"exits {first.returncode}, {second.returncode}, whole {whole}, "
           f"second said {err2.strip()[:200]!r}")


def f47_lock_deleted_while_stopped():
    """The lock file deleted by hand while its holder is suspended (as the waiting
    run's message once told), a second run finishes, then the first continues: one
    whole result, verify 0, no leftovers."""
    out = fresh("lockdel47")
    first = start("run", "seed1.toml", "--out", out, "--quiet")
    _wait_for(lambda: _entries(W, ".lockdel47.staging-"))
    first.send_signal(signal.SIGSTOP)
    lock = W / ".lockdel47.lock"
    if lock.exists():
        lock.unlink()
    second = fp("run", "site.toml", "--out", out, "--quiet")
    first.send_signal(signal.SIGCONT)
    first.communicate(timeout=300)
    whole = table_digests(out) in (table_digests(W / "r0"), table_digests(W / "r1"))
    record("the lock file deleted while its holder is stopped; a second run, then the first",
           whole and verify(out).returncode == 0 and not leftovers(W),
           f"exits {first.returncode}, {second.returncode}, whole {whole}, "
           f"left {leftovers(W)}")


def f47_two_runs_different_inputs():
    """Two runs of different input files (the bundle and one cut a week short) at once
    into one new folder: exit 0 both, one whole result that verifies."""
    short = W / "b" / "tower_short.csv"
    lines = (W / "b" / "tower.csv").read_text().splitlines(keepends=True)
    short.write_text("".join(lines[: len(lines) - 7 * 48]))
    (W / "b" / "short.toml").write_text((W / "b" / "site.toml").read_text()
                                        .replace('"tower.csv"', '"tower_short.csv"'))
    out = W / "diffin47"
    shutil.rmtree(out, ignore_errors=True)
    procs = [start("run", "site.toml", "--out", out, "--quiet"),
             start("run", "short.toml", "--out", out, "--quiet")]
    errs = [p.communicate(timeout=300)[1] for p in procs]
    code, clean, _ = _verified(out)
    record("two runs of different inputs at once into one folder",
           [p.returncode for p in procs] == [0, 0] and code == 0 and not leftovers(W),
           f"exits {[p.returncode for p in procs]}, verify {code}, "
           f"{[e.strip()[-80:] for e in errs]}")


def f47_table_of_older_download():
    """A table replaced by the same table of a run on an earlier download of the input
    (a week fewer records, same config): verify fails naming the table."""
    base = _own_copy("olddl47")
    older = W / "olddl47" / "older"
    lines = (base / "b" / "tower.csv").read_text().splitlines(keepends=True)
    (base / "b" / "tower.csv").write_text("".join(lines[: len(lines) - 7 * 48]))
    assert fp("run", "site.toml", "--out", older, "--quiet", cwd=base / "b").returncode == 0
    shutil.copy2(W / "b" / "tower.csv", base / "b" / "tower.csv")
    shutil.copy2(older / "daily.parquet", base / "r" / "daily.parquet")
    code, clean, done = _verified(base / "r")
    record("a table replaced by the run's of an earlier download", code == 1 and clean
           and "daily.parquet" in done.stdout, f"exit {code}, {done.stdout.strip()[:160]!r}")


def f47_out_spelled_otherwise():
    """--out given as ``r/``, ``./r/../r/`` and ``r//``: the one folder replaced each
    time, no leftovers beside it, verify 0."""
    parent = W / "spell47"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    codes = [fp("run", "site.toml", "--out", spelled, "--quiet").returncode
             for spelled in (f"{parent}/r/", f"{parent}/./r/../r/", f"{parent}//r//")]
    names = sorted(p.name for p in parent.iterdir())
    record("--out spelled r/, ./r/../r/, r//", codes == [0, 0, 0] and names == ["r"]
           and verify(parent / "r").returncode == 0, f"exits {codes}, folder {names}")


def f47_thread_env_garbage():
    """Thread-count variables set to nonsense by a site's login script (OMP_NUM_THREADS=0,
    OPENBLAS_NUM_THREADS=abc, MKL_NUM_THREADS=-1) and a locale that is not installed
    (LC_ALL=xx_XX.UTF-8): run byte-identical, verify 0, no traceback."""
    env = dict(ENV, OMP_NUM_THREADS="0", OPENBLAS_NUM_THREADS="abc", MKL_NUM_THREADS="-1",
               LC_ALL="xx_XX.UTF-8")
    out = W / "threads47"
    shutil.rmtree(out, ignore_errors=True)
    done = fp("run", "site.toml", "--out", out, "--quiet", env=env)
    code, clean, _ = _verified(out, env=env)
    record("thread counts 0, abc, -1 and an uninstalled locale: run, verify",
           done.returncode == 0 and code == 0 and clean and "Traceback" not in done.stderr
           and table_digests(out) == table_digests(W / "r0"),
           f"run {done.returncode}, verify {code}, {_stderr_tail(done)}")


def f47_windows_zip():
    """A result zipped as Windows' "Send to > Compressed folder" does (backslashes in
    the member names, no Unix modes, DOS times) and unpacked with unzip: verify 0."""
    import zipfile
    box = W / "winzip47"
    shutil.rmtree(box, ignore_errors=True)
    box.mkdir()
    with zipfile.ZipFile(box / "r0.zip", "w", zipfile.ZIP_DEFLATED) as archive:
        for path in sorted((W / "r0").rglob("*")):
            if path.is_file():
                info = zipfile.ZipInfo("r0\\" + str(path.relative_to(W / "r0"))
                                       .replace("/", "\\"), (2026, 12, 5, 10, 0, 0))
                info.create_system = 0      # MS-DOS: no Unix modes
                archive.writestr(info, path.read_bytes())
    if shutil.which("unzip") is None:
        record("a Windows zip of a result", False, "unprobed: no unzip")
        return
    subprocess.run(["unzip", "-q", "r0.zip"], cwd=box, capture_output=True)
    code, clean, done = _verified(box / "r0")
    record("a result through a Windows zip (backslash names, no modes)", code == 0 and clean,
           f"exit {code}, {sorted(p.name for p in box.iterdir())}")


def f47_manifest_utf16():
    """manifest.json re-saved as UTF-16 by a Windows editor (its text unchanged, as a BOM
    or CRLF leaves it): verify passes and report draws, no traceback; the manifest's
    content, under its seal, is what is checked."""
    folder = fresh("utf16_47")
    path = folder / "manifest.json"
    path.write_bytes(path.read_text(encoding="utf-8").encode("utf-16"))
    done = [verify(folder), fp("report", "--quiet", folder)]
    record("manifest.json re-saved as UTF-16: verify, report",
           all(d.returncode == 0 and "Traceback" not in d.stderr for d in done),
           f"exits {[d.returncode for d in done]}, {_stderr_tail(done[0])}")


def f47_kill9_first_run_then_commands():
    """kill -9 of a first run into a new folder as it writes: report, export and verify
    of --out each one error line, exit 2; the next run recovers, no leftovers."""
    out = W / "first47"
    shutil.rmtree(out, ignore_errors=True)
    proc = start("run", "site.toml", "--out", out, "--quiet")
    _wait_for(lambda: any(p.is_dir() and any(p.iterdir())
                          for p in _entries(W, ".first47.staging-")))
    proc.kill()
    proc.communicate(timeout=60)
    done = [verify(out), fp("report", "--quiet", out), fp("export", "--csv", W / "first47_csv",
                                                           out)]
    again = fp("run", "site.toml", "--out", out, "--quiet")
    record("kill -9 of a first run; verify, report, export of --out; rerun",
           all(one_line(d) for d in done) and again.returncode == 0
           and not (W / "first47_csv").exists() and not leftovers(W)
           and verify(out).returncode == 0,
           f"exits {[d.returncode for d in done]}, rerun {again.returncode}, "
           f"left {leftovers(W)}")


def f47_input_through_dropped_link():
    """The input's folder reached through a link (``data -> disk2/b``), --out inside it;
    then the link removed and the real folder used: verify of the result passes (the
    input is found relative to the result)."""
    base = W / "link47"
    shutil.rmtree(base, ignore_errors=True)
    real = base / "disk2" / "b"
    real.mkdir(parents=True)
    for file in ("site.toml", "tower.csv"):
        shutil.copy2(W / "b" / file, real / file)
    (base / "data").symlink_to(real)
    done = fp("run", base / "data" / "site.toml", "--out", base / "data" / "r", "--quiet",
              cwd=base)
    (base / "data").unlink()
    code, clean, said = _verified(real / "r")
    record("input and result reached through a link, the link then removed",
           done.returncode == 0 and code == 0, f"run {done.returncode}, verify {code}, "
           f"{said.stdout.strip()[:120]!r}{_stderr_tail(said)}")


def f47_network_through_tar():
    """A batch output folder through tar with --touch: verify of the network passes."""
    _net45()
    box = NET45 / "tar47"
    shutil.rmtree(box, ignore_errors=True)
    box.mkdir()
    subprocess.run(["tar", "-C", NET45, "-cf", box / "n.tar", "out"], check=True)
    subprocess.run(["tar", "--touch", "--no-same-permissions", "-xf", "n.tar"], cwd=box,
                   check=True)
    code, clean, done = _verified(box / "out")
    record("a network folder through tar --touch: verify", code == 0 and clean,
           f"exit {code}, {_said(done)}")


def f47_manifest_deleted():
    """manifest.json deleted from a result (a tidy-up of JSON files, a copy that left it
    out): verify, report and export say the folder holds a result's files whose manifest
    is gone (one line each, exit 2), and run into it refuses saying the same, the files
    kept."""
    folder = fresh("nomanifest47")
    (folder / "manifest.json").unlink()
    before = sorted(p.name for p in folder.iterdir())
    done = [verify(folder), fp("report", "--quiet", folder),
            fp("export", "--csv", W / "nomanifest47_csv", folder),
            fp("run", "site.toml", "--out", folder, "--quiet")]
    record("manifest.json deleted from a result: verify, report, export, run into it",
           all(one_line(d) and "manifest.json" in d.stderr and "result's files" in d.stderr
               for d in done) and sorted(p.name for p in folder.iterdir()) == before,
           f"exits {[d.returncode for d in done]}, {_stderr_tail(done[0])}")


def f47_verify_json_zone_locale():
    """verify --json of one result under UTC and C.UTF-8, and under TZ=Asia/Kolkata with
    LC_ALL=C: the same bytes (an auditor's script compares them)."""
    first = fp("verify", "--json", W / "r0")
    other = fp("verify", "--json", W / "r0", env=dict(ENV, TZ="Asia/Kolkata", LC_ALL="C"))
    record("verify --json under UTC and under Asia/Kolkata with LC_ALL=C",
           first.returncode == other.returncode == 0 and first.stdout == other.stdout,
           f"exits {first.returncode}, {other.returncode}, same {first.stdout == other.stdout}")


def f47_diff_of_copies():
    """diff of a result and its rsync -a / tar --touch copies: "same", exit 0."""
    seen = []
    for copy in (W / "rs_a", W / "tar47" / "r0"):
        if not copy.is_dir():
            continue
        done = fp("diff", W / "r0", copy)
        seen.append((done.returncode, "same:" in done.stdout))
    record("diff of a result and its rsync and tar copies", bool(seen)
           and all(code == 0 and same for code, same in seen), f"{seen}")


# ------------------------------------------------------------------ round faults48
#: Another fluxpart process holding a folder's lock (argv[1]) for argv[2] seconds.
_HOLD_LOCK = """
import sys, time
from fluxpart.resultdir import folder_lock
with folder_lock(sys.argv[1], 0):
    print("held", flush=True)
    time.sleep(float(sys.argv[2]))
"""


def _holding(folder, seconds=120):
    """A process holding the lock of `folder`, once it has it."""
    proc = subprocess.Popen([PY, "-c", _HOLD_LOCK, str(folder), str(seconds)], env=ENV,
                            stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "held"
    return proc


def _started_logged(args, log, cwd=None):
    """`args` started with stderr into the file `log` (read while it runs)."""
    handle = open(log, "w")
    proc = subprocess.Popen([PY, "-m", "fluxpart", *map(str, args)], env=ENV,
                            cwd=cwd or W / "b", stdout=subprocess.DEVNULL, stderr=handle,
                            text=True)
    handle.close()
    return proc


def f48_quiet_waiting_said():
    """run --quiet, report --quiet, export --csv and export --netcdf waiting for another
    process's lock: each says on stderr within 5 s that it waits and for whom (the
    holder's process id), once; after the holder ends each finishes (exit 0)."""
    seen = []
    out = W / "quietwait48"
    shutil.rmtree(out, ignore_errors=True)
    cases = [("run --quiet", ["run", "site.toml", "--out", out / "r", "--quiet"], out / "r"),
             ("report --quiet", ["report", "--quiet", out / "rep"], out / "rep"),
             ("export --csv", ["export", "--csv", out / "csv", out / "exp"], out / "csv"),
             ("export --netcdf", ["export", "--netcdf", out / "x.nc", out / "nc"],
              out / "x.nc")]
    out.mkdir()
    for name in ("rep", "exp", "nc"):
        shutil.copytree(W / "r0", out / name)
    for label, args, locked in cases:
        holder = _holding(locked)
        log = out / f"{label.split()[0]}{len(seen)}.err"
        proc = _started_logged(args, log)
        time.sleep(5)
        early = log.read_text()
        holder.kill()
        holder.wait()
        code = proc.wait(timeout=300)
        said = [x for x in log.read_text().splitlines() if "waiting" in x]
        seen.append((label, code, str(holder.pid) in early, len(said)))
    record("run/report/export waiting for another's lock say so and for whom, once",
           all(code == 0 and named and count == 1 for _, code, named, count in seen),
           f"(command, exit, holder named within 5 s, lines) {seen}")


def f48_holder_killed_waiter_takes_over():
    """kill -9 of a run holding a folder's lock while a second run (--quiet) waits for
    it: the second takes the lock, writes its result whole, no staging or lock left."""
    out = fresh("takeover48")
    first = start("run", "seed1.toml", "--out", out, "--quiet")
    _wait_for(lambda: _entries(W, ".takeover48.staging-"))
    second = start("run", "site.toml", "--out", out, "--quiet")
    time.sleep(2)
    first.kill()
    first.communicate(timeout=60)
    _, err2 = second.communicate(timeout=300)
    kind = _whole_kind(out, W / "r0", W / "r1")
    record("the lock holder killed -9 while a second run waits",
           second.returncode == 0 and kind == "r0" and verify(out).returncode == 0
           and not leftovers(W) and not (W / ".takeover48.lock").exists(),
           f"second {second.returncode}, holds {kind}, left {leftovers(W)}, "
           f"{err2.strip()[-120:]!r}")


def f48_waiter_killed():
    """kill -9 of the run that waits for another's lock: the holder finishes, one whole
    result, no lock file or staging left."""
    out = fresh("waiterk48")
    first = start("run", "seed1.toml", "--out", out, "--quiet")
    _wait_for(lambda: (W / ".waiterk48.lock").exists())
    second = start("run", "site.toml", "--out", out, "--quiet")
    time.sleep(1.5)
    second.kill()
    second.communicate(timeout=60)
    first.communicate(timeout=300)
    kind = _whole_kind(out, W / "r0", W / "r1")
    record("the waiting run killed -9; the holder finishes", first.returncode == 0
           and kind == "r1" and verify(out).returncode == 0 and not leftovers(W)
           and not (W / ".waiterk48.lock").exists(),
           f"first {first.returncode}, holds {kind}, left {leftovers(W)}")


def f48_three_runs_one_folder():
    """Three runs of three seeds at once into one new folder: exits 0, one whole result
    of one of them, verify 0, nothing left beside it."""
    text = (W / "b" / "site.toml").read_text()
    (W / "b" / "seed2.toml").write_text(text.replace("seed = 0", "seed = 2"))
    r2 = W / "r2_48"
    if not r2.exists():
        assert fp("run", "seed2.toml", "--out", r2, "--quiet").returncode == 0
    out = W / "three48"
    shutil.rmtree(out, ignore_errors=True)
    procs = [start("run", f"{n}.toml", "--out", out, "--quiet")
             for n in ("site", "seed1", "seed2")]
    codes = [p.communicate(timeout=600) and p.returncode for p in procs]
    kind = _whole_kind(out, W / "r0", W / "r1", r2)
    record("three runs of three seeds at once into one folder", codes == [0, 0, 0]
           and kind != "mixed" and verify(out).returncode == 0 and not leftovers(W),
           f"exits {codes}, holds {kind}, left {leftovers(W)}")


def f48_kill9_new_folder_moments():
    """kill -9 at 10 seeded moments of a first run into a new folder (5 over its writing):
    the folder is absent or whole, never partial; a rerun then writes it whole, verify
    0, nothing left beside it."""
    import random
    parent = W / "k9new48"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    staged, span = _writing_begins(parent, "run", "seed1.toml", "--out", parent / "r",
                                   "--quiet")
    draw = random.Random(48)
    moments = [draw.uniform(0, span) for _ in range(5)] + [
        draw.uniform(staged, span) for _ in range(5)]
    seen, wrong = {}, []
    for moment in moments:
        shutil.rmtree(parent / "r", ignore_errors=True)
        code = _killed_at(moment, "run", "seed1.toml", "--out", parent / "r", "--quiet")
        kind = _whole_kind(parent / "r", W / "r1")
        seen[kind] = seen.get(kind, 0) + 1
        if kind == "mixed" or code not in (0, -9):
            wrong.append((round(moment, 2), code, kind))
        if kind == "missing" and (parent / "r").exists():
            wrong.append((round(moment, 2), "partial folder"))
        again = fp("run", "seed1.toml", "--out", parent / "r", "--quiet")
        if again.returncode or _whole_kind(parent / "r", W / "r1") != "r1" or leftovers(parent):
            wrong.append((round(moment, 2), "rerun", again.returncode, leftovers(parent)))
    record("kill -9 at 10 moments of a first run into a new folder, then a rerun",
           not wrong and verify(parent / "r").returncode == 0,
           f"(kind: count) {seen}, wrong {wrong[:3]}")


def f48_kill9_report_then_run():
    """kill -9 at 6 seeded moments of report writing into a result, then a run into that
    folder: the run replaces it (exit 0, whole), verify 0, nothing left."""
    import random
    draw = random.Random(4848)
    wrong = []
    for trial in range(6):
        folder = fresh("k9rep48", "r1")
        _killed_at(draw.uniform(0.5, 4.0), "report", "--quiet", folder)
        run = fp("run", "site.toml", "--out", folder, "--quiet")
        if (run.returncode or _whole_kind(folder, W / "r0") != "r0"
                or verify(folder).returncode or leftovers(W) or leftovers(folder)):
            wrong.append((trial, run.returncode, errlines(run)[:1], leftovers(folder)))
    record("kill -9 of report at 6 moments, then run into the folder", not wrong,
           f"wrong {wrong[:2]}")


def f48_kill9_batch_then_rerun():
    """kill -9 of a whole 4-site batch (1 worker) at 3 seeded moments of a first batch,
    then the batch run again: exit 0, every site verifies, nothing left, byte-identical
    sites."""
    import random
    draw = random.Random(480)
    wrong = []
    make_net()
    assert fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET).returncode == 0
    clean = {p.name: table_digests(p) for p in (NET / "out").iterdir() if p.is_dir()}
    for trial in range(3):
        make_net()
        proc = subprocess.Popen([PY, "-m", "fluxpart", "batch", "sites.toml", "--quiet",
                                 "--workers", "1"], env=ENV, cwd=NET, start_new_session=True,
                                stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        try:
            proc.wait(timeout=draw.uniform(3, 25))
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
        proc.wait()
        time.sleep(0.5)
        rerun = fp("batch", "sites.toml", "--quiet", "--workers", "1", cwd=NET)
        codes = sites_verify(NET / "out") if (NET / "out").is_dir() else []
        same = {p.name: table_digests(p) for p in (NET / "out").iterdir() if p.is_dir()} == clean
        if rerun.returncode or codes != [0] * 4 or leftovers(NET / "out") or not same:
            wrong.append((trial, rerun.returncode, codes, leftovers(NET / "out")))
    record("kill -9 of a first batch at 3 moments, then the batch again", not wrong,
           f"wrong {wrong[:2]}")


def f48_foreign_manifest():
    """A folder of another tool holding its own ``manifest.json`` (a package manifest) and
    data files: run --out it refuses in one line naming the folder, nothing changed;
    verify fails in one line naming manifest.json."""
    folder = W / "foreign48"
    shutil.rmtree(folder, ignore_errors=True)
    folder.mkdir()
    (folder / "manifest.json").write_text('{"name": "tower-2021", "files": ["a.csv"]}\n')
    (folder / "a.csv").write_text("x,y\n1,2\n")
    before = sorted((p.name, p.read_bytes()) for p in folder.iterdir())
    run = fp("run", "site.toml", "--out", folder, "--quiet")
    ver = verify(folder)
    kept = sorted((p.name, p.read_bytes()) for p in folder.iterdir()) == before
    record("run into and verify of a folder with another tool's manifest.json",
           one_line(run) and kept and not leftovers(W) and ver.returncode in (1, 2)
           and "manifest.json" in ver.stdout + ver.stderr
           and "Traceback" not in ver.stdout + ver.stderr,
           f"run {run.returncode} {_stderr_tail(run)}, verify {ver.returncode} {_said(ver)}")


_INJECT_AT = """
import errno, os, sys
sys.path.insert(0, sys.argv[1])
code, name, match, nth = int(sys.argv[2]), sys.argv[3], sys.argv[4], int(sys.argv[5])
real = getattr(os, name)
seen = [0]
def failing(*args, **kwargs):
    text = " ".join(os.fsdecode(a) for a in args if isinstance(a, (str, bytes, os.PathLike)))
    if name == "fsync" or match in text:
        seen[0] += 1
        if seen[0] == nth:
            raise OSError(code, os.strerror(code), text or None)
    return real(*args, **kwargs)
setattr(os, name, failing)
from fluxpart import cli
sys.exit(cli.main(sys.argv[6:]))
"""


def f48_errors_at_writing():
    """EROFS making the staging folder, EDQUOT at the 3rd fsync, ENOSPC renaming a table
    into place, EIO renaming the manifest, EROFS at the swap's rename (injected in a
    subprocess, each into an earlier result): one ``error:`` line, exit 2, the earlier
    result intact and verified, nothing left beside it."""
    import errno
    cases = [("EROFS making the staging folder", errno.EROFS, "mkdir", ".staging-", 1),
             ("EDQUOT flushing a table", errno.EDQUOT, "fsync", "", 3),
             ("ENOSPC putting a table in place", errno.ENOSPC, "replace", ".parquet", 2),
             ("EIO putting the manifest in place", errno.EIO, "replace", "manifest.json", 1),
             ("EROFS at the swap", errno.EROFS, "rename", ".staging-", 1)]
    for label, code, name, match, nth in cases:
        # the swap into an existing folder is one renameat2 call (ctypes): a new folder's
        # swap is the os.rename patched here
        new = name == "rename"
        folder = W / "inj48new" if new else fresh("inj48")
        if new:
            shutil.rmtree(folder, ignore_errors=True)
        before = {} if new else table_digests(folder)
        done = subprocess.run([PY, "-c", _INJECT_AT, str(TREE), str(code), name, match,
                               str(nth), "run", "seed1.toml", "--out", folder, "--quiet"],
                              env=ENV, cwd=W / "b", capture_output=True, text=True,
                              timeout=300)
        intact = (not folder.exists() if new else table_digests(folder) == before
                  and verify(folder).returncode == 0)
        record(f"{label} (injected)", one_line(done) and intact and not leftovers(W),
               f"exit {done.returncode} {_stderr_tail(done)}, intact {intact}, "
               f"left {leftovers(W)}")


def f48_moved_across_file_systems():
    """A result moved to another file system (``shutil.move``: copy, then delete; /dev/shm)
    and renamed: verify and report pass there, its input left in place."""
    target = Path("/dev/shm") / f"fluxpart48-{os.getpid()}" / "moved result"
    shutil.rmtree(target.parent, ignore_errors=True)
    target.parent.mkdir()
    try:
        shutil.move(str(fresh("tomove48")), str(target))
        seen = (verify(target).returncode, fp("report", "--quiet", target).returncode,
                verify(target).returncode)
        record("a result moved to another file system and renamed: verify, report, verify",
               seen == (0, 0, 0), f"{seen}")
    finally:
        shutil.rmtree(target.parent, ignore_errors=True)


def f48_table_a_link_to_other_run():
    """A table replaced by a symbolic link to another seed's same table (``ln -sf``):
    verify fails naming the table."""
    folder = fresh("tlink48")
    (folder / "annual.parquet").unlink()      # the one table the seeds' results differ in
    (folder / "annual.parquet").symlink_to(W / "r1" / "annual.parquet")
    code, clean, done = _verified(folder)
    record("a table a link to another run's table", code == 1 and clean
           and "annual.parquet" in done.stdout, f"exit {code}, {_said(done, 200)}")


def f48_result_and_input_tarred():
    """The bundle (config, input) and its result tarred together with relative paths,
    the originals deleted, extracted elsewhere: verify finds the input beside it
    (relative to the result) and passes, from another working folder, with a relative
    result path and 2 threads."""
    base = _own_copy("pair48")
    box = W / "pair48_box"
    shutil.rmtree(box, ignore_errors=True)
    box.mkdir()
    subprocess.run(["tar", "-C", base, "-cf", box / "p.tar", "b", "r"], check=True)
    shutil.rmtree(base)
    (box / "x" / "y").mkdir(parents=True)
    subprocess.run(["tar", "-xf", "../../p.tar"], cwd=box / "x" / "y", check=True)
    env = dict(ENV, OMP_NUM_THREADS="2", OPENBLAS_NUM_THREADS="2")
    done = fp("verify", "--quiet", "y/r", env=env, cwd=box / "x")
    record("result and input tarred together, extracted elsewhere, verified from another folder",
           done.returncode == 0, f"exit {done.returncode} {_said(done, 200)}")


def f48_verify_relative_input_other_cwd():
    """verify with a relative result path and a relative --input, from the scratch folder
    (not the bundle's), with 1 and 2 threads: exit 0 both."""
    codes = []
    for threads in ("1", "2"):
        env = dict(ENV, OMP_NUM_THREADS=threads, OPENBLAS_NUM_THREADS=threads,
                   MKL_NUM_THREADS=threads)
        done = fp("verify", "--quiet", "r0", "--input", "b/tower.csv", env=env, cwd=W)
        codes.append(done.returncode)
    record("verify with relative result and --input paths from another folder, 1 and 2 threads",
           codes == [0, 0], f"exits {codes}")


def f48_one_cpu():
    """run under one CPU (sched_setaffinity, as ``taskset -c 0``) with 2 threads asked:
    tables byte-identical to a run on all CPUs, verify 0 under one CPU."""
    if not hasattr(os, "sched_setaffinity"):
        record("run and verify under one CPU", False, "unprobed: no sched_setaffinity")
        return
    cpu = min(os.sched_getaffinity(0))
    out = W / "onecpu48"
    shutil.rmtree(out, ignore_errors=True)
    env = dict(ENV, OMP_NUM_THREADS="2")
    run = subprocess.run([PY, "-c", "import os,sys; os.sched_setaffinity(0, {%d}); "
                          "from fluxpart import cli; sys.exit(cli.main(sys.argv[1:]))" % cpu,
                          "run", "site.toml", "--out", out, "--quiet"], env=env, cwd=W / "b",
                         capture_output=True, text=True)
    ver = subprocess.run([PY, "-c", "import os,sys; os.sched_setaffinity(0, {%d}); "
                          "from fluxpart import cli; sys.exit(cli.main(sys.argv[1:]))" % cpu,
                          "verify", "--quiet", str(W / "r0")], env=env, cwd=W / "b",
                         capture_output=True, text=True)
    record("run and verify under one CPU", run.returncode == 0 and ver.returncode == 0
           and table_digests(out) == table_digests(W / "r0"),
           f"run {run.returncode}, verify {ver.returncode}, same "
           f"{table_digests(out) == table_digests(W / 'r0')}")


def _input_edited(label, edit):
    """verify after `edit` of the input's bytes: exit status, whether the input file is
    named by its path (a note or an error; the summary names the recorded file alone)."""
    base = _own_copy(f"edit48_{label}")
    path = base / "b" / "tower.csv"
    path.write_bytes(edit(path.read_bytes()))
    done = fp("verify", base / "r")
    return done.returncode, str(path) in done.stdout + done.stderr, done


def f48_input_one_byte():
    """One digit of one data row of the input changed after the run: verify fails
    (exit 1 or 2), naming the input file."""
    def edit(data):
        lines = data.split(b"\n")
        row = lines[500]
        at = next(i for i in range(len(row) - 1, 0, -1) if row[i:i + 1].isdigit())
        lines[500] = row[:at] + (b"1" if row[at:at + 1] != b"1" else b"2") + row[at + 1:]
        return b"\n".join(lines)
    code, named, done = _input_edited("byte", edit)
    record("one byte of the input changed after the run", code in (1, 2) and named,
           f"exit {code}, named {named}, {_said(done, 200)}")


def f48_input_newline_edits():
    """The input's final line break removed, and a blank line added at its end, after the
    run: verify names the input (passes with a note where it restores the recorded bytes,
    or fails naming it)."""
    seen = []
    for label, edit in (("no final newline", lambda d: d.rstrip(b"\n")),
                        ("blank line added", lambda d: d + b"\n")):
        code, named, done = _input_edited(label.split()[0], edit)
        seen.append((label, code, named))
    record("the input's final newline removed or a blank line added after the run",
           all(named and code in (0, 1, 2) for _, code, named in seen), f"{seen}")


def f48_input_bom_added():
    """A byte-order mark put before the input's first line (a Windows editor re-saving
    it): verify names the input."""
    code, named, done = _input_edited("bom", lambda d: b"\xef\xbb\xbf" + d)
    record("a byte-order mark added to the input after the run", named and code in (0, 1, 2),
           f"exit {code}, {_said(done, 200)}")


def f48_input_header_renamed():
    """The NEE column renamed in the input's header after the run (values kept): verify
    fails, naming the input."""
    def edit(data):
        head, rest = data.split(b"\n", 1)
        first = head.split(b",")
        first[1] = first[1] + b"_x"
        return b",".join(first) + b"\n" + rest
    code, named, done = _input_edited("header", edit)
    record("a column of the input renamed after the run", code in (1, 2) and named,
           f"exit {code}, {_said(done, 200)}")


def f48_manifest_duplicate_key():
    """A second ``seal`` or ``tables`` key appended to manifest.json (parsers that take the
    first and those that take the last read different manifests): verify fails naming
    manifest.json."""
    seen = []
    for key in ("seal", "tables"):
        folder = fresh(f"dupkey48_{key}")
        text = (folder / "manifest.json").read_text()
        import json
        value = json.loads(text)[key]
        other = json.dumps(value if key == "tables" else "0" * 64)
        (folder / "manifest.json").write_text(text.rstrip().rstrip("}") + f', "{key}": {other}}}\n')
        code, clean, done = _verified(folder)
        seen.append((key, code, clean and "manifest.json" in done.stdout + done.stderr))
    record("a key written twice in manifest.json", all(code in (1, 2) and named
                                                       for _, code, named in seen), f"{seen}")


def f48_clock_back_between_runs():
    """A run, then a second run of another seed into the same folder with the clock a year
    back (``time.time`` patched by a sitecustomize), then a third on the right clock:
    each replaces the folder whole, verify 0 after each, nothing left."""
    site = W / "clockback48"
    site.mkdir(exist_ok=True)
    (site / "sitecustomize.py").write_text(_CLOCK_STEP.format(step=-365 * 86400, after=0.0))
    back = dict(ENV, PYTHONPATH=f"{site}{os.pathsep}{TREE}")
    folder = fresh("clkback48", "r0")
    steps = [fp("run", "seed1.toml", "--out", folder, "--quiet", env=back)]
    kinds = [_whole_kind(folder, W / "r0", W / "r1")]
    steps.append(verify(folder))
    steps.append(fp("run", "site.toml", "--out", folder, "--quiet"))
    kinds.append(_whole_kind(folder, W / "r0", W / "r1"))
    steps.append(verify(folder, env=back))
    record("the clock a year back between two runs into one folder",
           [s.returncode for s in steps] == [0] * 4 and kinds == ["r1", "r0"]
           and not leftovers(W), f"exits {[s.returncode for s in steps]}, kinds {kinds}, "
           f"{[e for s in steps for e in errlines(s)][:1]!r:.150}")


def f48_sibling_prefix_names():
    """Two result folders whose names extend one another (``r`` and ``r.staging-1``,
    as a user may name a copy): the run into the first, while the second's run is
    suspended mid-write, leaves the second's staging alone; both end whole."""
    parent = W / "prefix48"
    shutil.rmtree(parent, ignore_errors=True)
    parent.mkdir()
    second = start("run", "seed1.toml", "--out", parent / "r.staging-1", "--quiet")
    _wait_for(lambda: _entries(parent, ".r.staging-1.staging-"))
    second.send_signal(signal.SIGSTOP)
    staged = _entries(parent, ".r.staging-1.staging-")
    first = fp("run", "site.toml", "--out", parent / "r", "--quiet")
    kept = bool(staged) and all(p.is_dir() for p in staged)
    second.send_signal(signal.SIGCONT)
    _, err2 = second.communicate(timeout=300)
    kinds = (_whole_kind(parent / "r", W / "r0"), _whole_kind(parent / "r.staging-1", W / "r1"))
    record("a run into r while a run into r.staging-1 is suspended mid-write",
           first.returncode == 0 and second.returncode == 0 and kinds == ("r0", "r1") and kept,
           f"exits {first.returncode}, {second.returncode}, kinds {kinds}, staged {len(staged)}, the sibling's "
           f"staging kept {kept} {err2.strip()[-150:]!r}")


def f48_out_mount_point():
    """--out a mount point (a tmpfs mounted there, as a container's output volume):
    empty, then holding a result; run either writes the result or refuses in one line
    naming what to do; a refused run changes nothing; verify of what is there passes."""
    disk = _tmpfs("mnt48", "50m")
    if disk is None:
        record("--out a mount point", False, "unprobed: mount refused")
        return
    try:
        first = fp("run", "site.toml", "--out", disk, "--quiet")
        fine1 = (first.returncode == 0 and verify(disk).returncode == 0) or (
            one_line(first) and not any(disk.iterdir()))
        again = fp("run", "seed1.toml", "--out", disk, "--quiet")
        fine2 = (again.returncode == 0 and verify(disk).returncode == 0) or one_line(again)
        record("--out a mount point, empty then holding a result", fine1 and fine2
               and not leftovers(W) and not leftovers(disk),
               f"first {first.returncode} {_stderr_tail(first)}, second {again.returncode} "
               f"{_stderr_tail(again)}")
    finally:
        subprocess.run(["umount", str(disk)])


def f48_verify_read_only_copy_other_user():
    """A result copied with ``cp -r`` (times now), made read-only (chmod -R a-w), then
    verified and reported into another folder by an unprivileged user: exit 0 both."""
    if shutil.which("setpriv") is None:
        record("a read-only cp -r copy verified by another user", False, "unprobed: no setpriv")
        return
    copy = W / "rocopy48"
    shutil.rmtree(copy, ignore_errors=True)
    subprocess.run(["cp", "-r", W / "r0", copy], check=True)
    subprocess.run(["chmod", "-R", "a-w,a+rX", copy], check=True)
    _readable_by_all(W / "b" / "tower.csv")
    _readable_by_all(copy)
    page = Path(tempfile.mkdtemp(prefix="fp48rep-"))
    os.chmod(page, 0o777)
    try:
        ver = _as_user("verify", "--quiet", copy, env=dict(ENV, HOME=str(page)))
        rep = _as_user("report", "--quiet", copy, "--out", page / "rep",
                       env=dict(ENV, HOME=str(page), MPLCONFIGDIR=str(page)))
        record("a read-only cp -r copy verified and reported by another user",
               ver.returncode == 0 and rep.returncode == 0,
               f"verify {ver.returncode} {_said(ver)}, report {rep.returncode} {_said(rep)}")
    finally:
        subprocess.run(["chmod", "-R", "u+w", copy])
        shutil.rmtree(page, ignore_errors=True)


def f48_tables_swapped_names():
    """Two tables of one result swapped by name (daily.parquet <-> monthly.parquet):
    verify fails naming both."""
    folder = fresh("swapnames48")
    daily, monthly = folder / "daily.parquet", folder / "monthly.parquet"
    daily.rename(folder / "t.tmp")
    monthly.rename(daily)
    (folder / "t.tmp").rename(monthly)
    code, clean, done = _verified(folder)
    record("two tables swapped by name", code == 1 and clean and "daily.parquet" in done.stdout
           and "monthly.parquet" in done.stdout, f"exit {code}, {_said(done, 200)}")


def f48_reader_waits_for_repair():
    """A result left in its retired copy (a writer stopped between its two renames) while
    another process holds the folder's lock: verify says within 5 s that it waits and for
    whom, and puts the result back once the holder ends (exit 0); with the holder there
    past the reader's wait, one error line naming the holder, the copy left alone."""
    seen = []
    for label, hold in (("holder ends", 6), ("holder stays", 120)):
        folder = fresh("repair48")
        retired = W / ".repair48.retired-0a1b2c3d"
        shutil.rmtree(retired, ignore_errors=True)
        folder.rename(retired)
        holder = _holding(folder, hold)
        log = W / "repair48.err"
        proc = _started_logged(["verify", "--quiet", folder], log)
        time.sleep(5)
        early = log.read_text()
        code = proc.wait(timeout=120)
        holder.kill()
        holder.wait()
        text = log.read_text()
        if hold < 30:
            fine = (code == 0 and str(holder.pid) in early and "waiting" in early
                    and folder.is_dir() and not retired.exists())
        else:
            errors = [x for x in text.splitlines() if x.startswith("error:")]
            fine = (code == 2 and len(errors) == 1 and str(holder.pid) in errors[0]
                    and retired.is_dir() and not folder.exists())
        seen.append((label, code, fine, text.strip()[-160:]))
        shutil.rmtree(retired, ignore_errors=True)
    record("verify of a result in its retired copy while another process holds the lock",
           all(fine for _, _, fine, _ in seen), f"{seen}")


def f48_run_log_lost():
    """run-log.json (unhashed: who ran it, when, where) deleted, and cut to a broken
    JSON, after the run: verify passes (the numbers are whole) with a note naming it."""
    seen = []
    for label, edit in (("deleted", lambda p: p.unlink()),
                        ("cut", lambda p: p.write_bytes(p.read_bytes()[:40]))):
        folder = fresh(f"runlog48_{label}")
        edit(folder / "run-log.json")
        done = fp("verify", folder)
        noted = any(line.startswith("note: run-log.json") for line in done.stdout.splitlines())
        seen.append((label, done.returncode, noted))
    record("the run log deleted or cut after the run: verify notes it",
           all(code == 0 and noted for _, code, noted in seen), f"{seen}")


def f48_report_of_other_result():
    """The report/ folder of another result copied into a result (``cp -r r0/report
    r1/``, as a merge of two copies does): verify notes that the page was drawn from
    another result, naming report.html; the folder's own page gives no such note."""
    folder = fresh("rpx48", "r1")
    donor = fresh("rpx48_donor", "r0")
    assert fp("report", "--quiet", donor).returncode == 0
    assert fp("report", "--quiet", folder).returncode == 0
    own = fp("verify", folder)
    shutil.rmtree(folder / "report")
    shutil.copytree(donor / "report", folder / "report")
    other = fp("verify", folder)
    said = [x for x in other.stdout.splitlines() if "drawn from another result" in x]
    record("another result's report page copied into a result: verify names it",
           own.returncode == 0 and "drawn from another result" not in own.stdout
           and other.returncode == 0 and len(said) == 1 and "report.html" in said[0],
           f"own {own.returncode}, other {other.returncode} {said[:1]!r:.200}")



# ------------------------------------------------------------------ round review91
def f91_kill9_dotted_names():
    """SIGKILL at five points of ``run`` replacing a result whose folder name holds dots
    (``site.2023``, ``r.v2``), a sibling ``site`` (whose name the first one extends) kept
    beside: the folder holds the old result or the new one whole (a reader puts a result
    left in its retired copy back), the next run writes the new one whole, verify 0,
    nothing left beside, and the sibling untouched."""
    old, new = table_digests(W / "r1"), table_digests(W / "r0")
    parent = W / "dots91"
    for name in ("site.2023", "r.v2"):
        for point in ("table 5", "manifest", "swap", "after the exchange",
                      "between two renames"):
            shutil.rmtree(parent, ignore_errors=True)
            parent.mkdir()
            shutil.copytree(W / "r1", parent / name)
            shutil.copytree(W / "r1", parent / name.split(".")[0])
            folder = parent / name
            done = stopped_at(point, signal.SIGKILL, "run", "site.toml", "--out", folder,
                              "--quiet")
            left = leftovers(parent)
            check = fp("verify", "--quiet", folder)
            now = table_digests(folder) if folder.is_dir() else None
            again = fp("run", "site.toml", "--out", folder, "--quiet")
            sibling = table_digests(parent / name.split(".")[0]) == old
            held = (done.returncode == -9 and now in (old, new) and check.returncode == 0
                    and again.returncode == 0 and table_digests(folder) == new
                    and not leftovers(parent) and verify(folder).returncode == 0 and sibling
                    and sorted(p.name for p in parent.iterdir()) == sorted(
                        [name, name.split(".")[0]]))
            record(f"SIGKILL at {point} of run into {name!r} (sibling beside)", held,
                   f"exit {done.returncode}, left {left}, folder "
                   f"{'old' if now == old else 'new' if now == new else 'MIXED/none'}, "
                   f"verify {check.returncode} {_stderr_tail(check, 80)}, next run "
                   f"{again.returncode} {_stderr_tail(again, 80)}, now "
                   f"{sorted(p.name for p in parent.iterdir())}, sibling whole {sibling}")

FAULTS = [f_signals, f_table_of_other_run, f_manifest_of_other_run,
          f_whole_other_run_with_own_log, f_odd_path, f_symlinked_result, f_kill_verify,
          f_kill_report, f_clock_set_back_staging, f_environment_bytes,
          f_concurrent_two_folders, f_injected, f_moved_during_report,
          f_other_platform_verify, f_input_changing, f_batch_stopped, f_batch_group_signal,
          f_batch_worker_killed, f_batch_odd_out,
          # round faults36
          f_file_size_limit, f_open_file_limit, f_memory_limit, f_input_fifo, f_input_symlink,
          f_out_symlink, f_out_is_file, f_out_not_utf8, f_same_folder_twice,
          f_other_tools_folder, f_stale_lock_other_host, f_verify_damaged, f_readonly_rerun,
          f_disk_full,
          f_locale_bytes, f_future_mtimes, f_huge_line, f_quotes_path,
          f_input_replaced_by_rename, f_batch_killed_rerun, f_batch_full_disk,
          f_batch_open_files, f_hard_linked_copy, f_report_folder_link,
          f_compressed_input_damaged, f_stack_limit,
          # round faults37
          f_path_control_characters, f_report_memory_line, f_run_quiet_promise,
          f_stop_netcdf_and_report, f_table_of_other_run_why,
          f_diff_older_release, f_input_unmounted_lazily,
          # round faults38
          f_run_while_verify, f_out_odd_parents, f_closed_streams, f_locales_non_ascii,
          f_report_locale_tz, f_matplotlib_config, f_tmpdir_odd, f_umasks, f_long_paths,
          f_logger_appending, f_input_replaced_after_check, f_clock_far, f_cpu_limit,
          f_open_files_readers, f_data_limit, f_signal_dispositions, f_sigquit,
          f_verify_saved_inside, f_deleted_cwd, f_two_csv_exports, f_no_locks,
          f_blas_kernel, f_batch_scratch,
          # round faults39
          f_two_sites_new_parent, f_copy_during_swap, f_noexec_tmpfs, f_copy_without_times,
          f_report_folder_gone_or_file, f_verify_inputs_moved_twice, f_config_link_retargeted,
          f_batch_two_configs_one_folder, f_reader_leaves_verify_diff_report,
          f_new_out_readonly_mount, f_env_differs_run_verify, f_two_reports_at_once,
          f_out_is_current_folder, f_export_into_result, f_ten_years_of_minutes,
          f_batch_resumed_half_staged,
          # round faults40
          f_stops_at_points, f_full_disk_each_table, f_full_disk_report_netcdf,
          f_clock_steps_back, f_parquet_footer_damaged, f_report_while_run_swaps,
          f_home_read_only, f_tmpdir_missing_or_read_only, f_locale_printed_numbers,
          f_stdin_closed_run_batch, f_batch_ctrl_c_twice, f_batch_parent_killed,
          f_batch_external_scheduler_killed, f_parent_renamed_during_run,
          f_stop_while_waiting_for_lock, f_stopped_twice, f_batch_stopped_at_network_tables,
          # round faults41
          f_batch_same_bytes_as_run, f_batch_hung_site, f_batch_worker_memory_limit,
          f_batch_thirty_sites, f_batch_sites_file_edited, f_batch_two_at_once,
          f_batch_odd_network_path, f_batch_long_site_name, f_batch_listed_config_not_a_file,
          f_batch_scratch_unusable, f_batch_killed_then_input_changed,
          # round faults42
          f_kill9_random_moments_run, f_kill9_random_moments_report_export, f_zip_round_trip,
          f_input_resaved_by_spreadsheet, f_parquet_rewritten_same_values, f_batch_site_alone,
          f_two_runs_existing_other_configs, f_input_appended_during_read,
          f_out_symlink_other_disk, f_git_crlf_checkout, f_manifest_number_edited,
          f_netcdf_through_link, f_staging_given_as_result, f_verify_json,
          # round faults43
          f_out_holds_input, f_relative_input_moved_up, f_package_elsewhere,
          f_verify_other_library_versions, f_table_cut_and_padded, f_result_renamed_odd,
          f_export_into_occupied, f_load_while_runs_write, f_batch_kill9_moments,
          f_table_cut_resealed, f_ctrl_c_pipeline, f_run_log_points_elsewhere,
          f_netcdf_into_result,
          # round faults44
          f_batch_scheduler_addresses, f_batch_all_or_some_fail,
          f_batch_worker_killed_every_try, f_batch_spinning_site, f_batch_key_reassigned,
          f_batch_duplicate_spellings, f_batch_verify_network_folder,
          f_batch_worker_peak_memory,
          # round faults45
          f45_failures_table_edited, f45_scheduler_empty, f45_network_copied_without_times,
          f45_network_moved, f45_network_seal_bom_crlf, f45_other_commands_on_network,
          f45_batch_resumed_config_changed, f45_config_bom_crlf, f45_sites_file_bom_crlf,
          f45_report_out_into_results, f45_run_out_into_network, f45_verify_network_stopped,
          f45_verify_from_inside, f45_network_site_replaced_by_copy,
          f45_batch_resumed_sites_changed, f45_two_verifies_of_a_network,
          # round faults46
          f46_long_final_name, f46_out_is_the_input_file, f46_out_inside_input_folder,
          f46_input_deleted_after_check, f46_manifest_pretty_printed, f46_table_renamed_bak,
          f46_two_verifies_one_result, f46_verify_as_other_user, f46_other_users_result,
          f46_report_mpl_cache_unwritable, f46_turkish_locale,
          f46_nice_two_threads_far_zone, f46_batch_zero_byte_files, f46_sigint_verify,
          f46_mtimes_rounded, f46_out_below_link_loop, f46_network_site_input_missing,
          f46_diff_residue,
          # round network56
          f56_verify_batch_stopped_before_its_seal, f56_one_or_two_workers_same_bytes,
          # round faults47
          f47_rsync_copies, f47_rsync_cut_short, f47_tar_touch, f47_file_manager_litter,
          f47_nested_copy, f47_sync_conflict_copies, f47_manifest_case_changed,
          f47_half_hour_zone_c_locale_umask, f47_python_flags, f47_config_edited_after_run,
          f47_input_touched, f47_input_compressed_after_run, f47_input_compressed_and_changed,
          f47_stopped_lock_holder, f47_lock_deleted_while_stopped,
          f47_two_runs_different_inputs, f47_table_of_older_download,
          f47_out_spelled_otherwise, f47_thread_env_garbage, f47_windows_zip,
          f47_manifest_utf16, f47_kill9_first_run_then_commands,
          f47_input_through_dropped_link, f47_network_through_tar, f47_manifest_deleted,
          f47_verify_json_zone_locale, f47_diff_of_copies,
          # round review83
          f83_bomb_beside_input,
          # round faults48
          f48_quiet_waiting_said, f48_holder_killed_waiter_takes_over, f48_waiter_killed,
          f48_three_runs_one_folder, f48_kill9_new_folder_moments, f48_kill9_report_then_run,
          f48_kill9_batch_then_rerun, f48_foreign_manifest, f48_errors_at_writing,
          f48_moved_across_file_systems, f48_table_a_link_to_other_run,
          f48_result_and_input_tarred, f48_verify_relative_input_other_cwd, f48_one_cpu,
          f48_input_one_byte, f48_input_newline_edits, f48_input_bom_added,
          f48_input_header_renamed, f48_manifest_duplicate_key, f48_clock_back_between_runs,
          f48_sibling_prefix_names, f48_out_mount_point, f48_verify_read_only_copy_other_user,
          f48_tables_swapped_names, f48_reader_waits_for_repair,
          f48_run_log_lost, f48_report_of_other_result,
          # round review91
          f91_kill9_dotted_names]

if __name__ == "__main__":
    # a probe started in the background by a non-interactive shell inherits SIGINT ignored,
    # and so would every command it starts (Ctrl-C faults then probe nothing)
    signal.signal(signal.SIGINT, signal.default_int_handler)
    wanted = [a for a in sys.argv[1:]
              if a.startswith(("f_", "f45_", "f46_", "f47_", "f48_", "f56_", "f83_", "f91_"))]
    if not (W / "r1").exists():
        setup()
    for fault in FAULTS:
        if not wanted or fault.__name__ in wanted:
            fault()
    print(f"held {sum(r[1] for r in results)} of {len(results)} ({W})")
