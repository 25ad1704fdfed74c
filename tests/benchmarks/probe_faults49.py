"""Probe: result-safety faults of round faults49 (issue 12), as real machines and clusters
produce them.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_faults49.py``
(``--dir DIR`` for the scratch folder; names of fault functions, ``f49_...``, to run only
those). It reuses the helpers and the 30-day bundle of ``probe_faults.py`` (the invented
Quillmoor example) and prints one line per case: ``held`` or ``FAILED``, what was
expected and what was seen; the last line counts the cases held.

Cases: a job scheduler's stop (SIGTERM, then SIGKILL after a grace of 0, 50 and 300 ms,
as ``scancel`` or ``docker stop`` send them) during run; SIGHUP (a closed terminal or a
dropped ssh) during run, report and export; SIGKILL at each point of report and of a CSV
export; SIGKILL of ``export --netcdf`` over an earlier file at seeded moments; a Dask
worker stopped with SIGTERM mid-site (a drained node); two runs at once into one folder
spelled through a linked parent and from another working folder; a bundle and result on
a path with spaces and non-ASCII letters, moved; a read-only result given to every
reading command and to report; a full tmpfs under export --csv and report --out; ENOSPC
injected as report and export --netcdf put their file in place; files dated 1970 and
before; the bundle and result zipped and unpacked elsewhere under a new name; tables
re-saved by other Parquet writers; report stopped the moment its staging folder appears;
thread pools at 1 and 2; exports and diff looped while runs replace the folder; the input
renamed; the input zipped (``zip -m``, a
Windows compressed folder) or zstd-compressed after the run; one table value changed,
with and without a resealed manifest; a warning deleted from a resealed manifest; the
input changed and its SHA-256 resealed; the input edited after the run (report and export
unaffected); a linked input's file edited, moved with the link and put back;
leftovers and a lock file dated in the future (a clock set back), then run.
"""
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import probe_faults as pf  # noqa: E402  (the helpers and the scratch folder W)

ENV, PY, RESEAL, TREE, W = pf.ENV, pf.PY, pf.RESEAL, pf.TREE, pf.W
fp, fresh, leftovers, one_line, record = pf.fp, pf.fresh, pf.leftovers, pf.one_line, pf.record
start, table_digests, verify = pf.start, pf.table_digests, pf.verify


def _said(done, width=160):
    return repr((done.stdout + done.stderr).strip()[:width])


def _tail(done, width=160):
    return repr(done.stderr.strip()[-width:])


def _staged(name):
    return lambda: any(p.name.startswith(f".{name}.staging-") for p in W.iterdir())


def _wait(check, seconds=120):
    deadline = time.time() + seconds
    while time.time() < deadline and not check():
        time.sleep(0.003)
    return check()


def _own_bundle(name, parent=None):
    """A bundle of its own (b/) and its result (r/) under `parent`/`name`."""
    base = (parent or W) / name
    shutil.rmtree(base, ignore_errors=True)
    (base / "b").mkdir(parents=True)
    for file in ("site.toml", "tower.csv"):
        shutil.copy2(W / "b" / file, base / "b" / file)
    done = fp("run", "site.toml", "--out", base / "r", "--quiet", cwd=base / "b")
    assert done.returncode == 0, done.stderr
    return base


# ------------------------------------------------------------------ stops of a scheduler
def f49_scancel_grace():
    """SIGTERM, then SIGKILL after a grace of 0, 50 and 300 ms (``scancel``, ``docker
    stop -t``, systemd's TimeoutStopSec: the process may be killed while it unwinds),
    sent as run stages a result over an earlier one: the folder holds the old result or
    the new one whole; the next run writes it whole, nothing left beside it."""
    old, new = table_digests(W / "r1"), table_digests(W / "r0")
    wrong = []
    for grace in (0.0, 0.05, 0.3):
        folder = fresh("scancel49", "r1")
        proc = start("run", "site.toml", "--out", folder, "--quiet")
        _wait(lambda proc=proc: proc.poll() is not None or _staged("scancel49")())
        if proc.poll() is None:
            proc.send_signal(signal.SIGTERM)
            time.sleep(grace)
            if proc.poll() is None:
                proc.kill()
        proc.communicate(timeout=120)
        now = table_digests(folder) if folder.is_dir() else None
        again = fp("run", "site.toml", "--out", folder, "--quiet")
        if (now not in (old, new) or again.returncode or table_digests(folder) != new
                or leftovers(W) or verify(folder).returncode):
            wrong.append((grace, proc.returncode, "whole" if now in (old, new) else "MIXED",
                          again.returncode, leftovers(W)))
    record("SIGTERM then SIGKILL after 0/50/300 ms during run (expected: old or new whole, "
           "rerun whole, nothing left)", not wrong, f"wrong {wrong}")


def f49_sighup():
    """SIGHUP (the terminal closed, an ssh session dropped) during run, report and
    export --csv as each begins to write: exit 129 with one ``error:`` line, the
    earlier result (page) whole, nothing left."""
    seen = []
    for command in ("run", "report", "export"):
        folder = fresh("hup49", "r1")
        fp("report", "--quiet", folder)
        page = (folder / "report" / "report.html").read_bytes()
        before = table_digests(folder)
        shutil.rmtree(W / "hup49_csv", ignore_errors=True)
        args = {"run": ["run", "site.toml", "--out", folder, "--quiet"],
                "report": ["report", "--quiet", folder],
                "export": ["export", "--csv", W / "hup49_csv", folder]}[command]
        appeared = {"run": _staged("hup49"),
                    "report": lambda folder=folder: any(".report.staging-" in p.name
                                                        for p in folder.iterdir()),
                    "export": lambda: any(p.name.startswith(".hup49_csv")
                                          for p in W.iterdir())}[command]
        done = pf.stop_when(args, signal.SIGHUP, appeared)
        left = leftovers(W) + leftovers(folder)
        ok = (one_line(done, 129) and table_digests(folder) == before and not left
              and (folder / "report" / "report.html").read_bytes() == page
              and not (W / "hup49_csv").exists())
        seen.append((command, done.returncode, ok, left))
    record("SIGHUP during run, report, export --csv (expected: exit 129, one line, old "
           "whole, nothing left)", all(s[2] for s in seen), f"{seen}")


def f49_kill9_report_export_points():
    """SIGKILL at the report's figure write and at a CSV export's third file (the stop
    points of probe_faults): the earlier page whole, no CSV folder; report and export
    then succeed, nothing left."""
    seen = []
    for point, args in (("report figure", ["report", "--quiet"]),
                        ("csv file", ["export", "--csv", W / "k9csv49"])):
        folder = fresh("k9pts49")
        fp("report", "--quiet", folder)
        page = (folder / "report" / "report.html").read_bytes()
        shutil.rmtree(W / "k9csv49", ignore_errors=True)
        done = pf.stopped_at(point, signal.SIGKILL, *args, folder)
        intact = ((folder / "report" / "report.html").read_bytes() == page
                  and not (W / "k9csv49").exists())
        again = fp(*args, folder)
        seen.append((point, done.returncode, intact, again.returncode,
                     leftovers(W) + leftovers(folder)))
    record("SIGKILL at report's figure write and at a CSV export's file (expected: page "
           "whole, no CSV folder; then 0, nothing left)",
           all(code == -9 and intact and again == 0 and not left
               for _, code, intact, again, left in seen), f"{seen}")


def f49_kill9_netcdf_over_earlier():
    """SIGKILL at 5 seeded moments of ``export --netcdf`` over an earlier export of
    another result: the file is the earlier one or the new one whole, no temporary file
    beside it."""
    import random
    draw = random.Random(49)
    target = W / "nc49" / "site.nc"
    shutil.rmtree(target.parent, ignore_errors=True)
    target.parent.mkdir()
    assert fp("export", "--netcdf", target, W / "r0").returncode == 0
    new = target.read_bytes()
    assert fp("export", "--netcdf", W / "nc49" / "old.nc", W / "r1").returncode == 0
    old = (W / "nc49" / "old.nc").read_bytes()
    wrong = []
    for _ in range(5):
        target.write_bytes(old)
        pf._killed_at(draw.uniform(0.3, 3.0), "export", "--netcdf", target, W / "r0")
        others = sorted(p.name for p in target.parent.iterdir()
                        if p.name not in ("site.nc", "old.nc"))
        if target.read_bytes() not in (old, new) or others:
            wrong.append((len(target.read_bytes()), others))
    record("SIGKILL at 5 moments of export --netcdf over an earlier file (expected: old or "
           "new whole, nothing beside)", not wrong, f"wrong {wrong}")


def f49_batch_worker_sigterm():
    """A Dask worker sent SIGTERM (not -9) while a site is written (a node drained by
    the cluster, a container stopped): the batch ends with every site computed, each
    site folder whole and verified, nothing left."""
    pf.make_net()
    proc = start("batch", "sites.toml", "--quiet", "--workers", "2", cwd=pf.NET)
    victim, deadline = None, time.time() + 90
    while victim is None and time.time() < deadline and proc.poll() is None:
        if (pf.NET / "out").exists() and any(".staging-" in p.name
                                             for p in (pf.NET / "out").iterdir()):
            kids = pf.descendants(proc.pid)
            grand = [k for k in kids if k not in pf.descendants_direct(proc.pid)
                     and "forkserver" in pf._cmdline(k) and pf._parent(k) in kids]
            victim = grand[-1] if grand else None
        time.sleep(0.02)
    if victim:
        os.kill(victim, signal.SIGTERM)
    _, err = proc.communicate(timeout=600)
    codes = pf.sites_verify(pf.NET / "out")
    left = leftovers(pf.NET / "out")
    record("a Dask worker sent SIGTERM while a site is written (expected: exit 0, 4 sites "
           "verified, nothing left)", victim is not None and proc.returncode == 0
           and codes == [0] * 4 and not left,
           f"signalled {victim}, exit {proc.returncode}, verify {codes}, left {left}, "
           f"{[x for x in err.splitlines() if x.startswith('error')][:2]}")


# ------------------------------------------------------------------ two writers
def f49_two_runs_linked_parent():
    """Two runs of two seeds at once into one folder, one spelled through a symbolic
    link to its parent and from another working folder (relative): one whole result,
    both exit 0, nothing left."""
    real = W / "twin49"
    shutil.rmtree(real, ignore_errors=True)
    real.mkdir()
    link = pf.linked("twin49_link", real)
    first = start("run", "site.toml", "--out", link / "r", "--quiet")
    second = start("run", str(W / "b" / "seed1.toml"), "--out", "twin49/r", "--quiet",
                   cwd=W)
    codes = [p.communicate(timeout=600) and p.returncode for p in (first, second)]
    kind = pf._whole_kind(real / "r", W / "r0", W / "r1")
    record("two runs at once into one folder via a linked parent and a relative path "
           "(expected: exits 0, one whole result, nothing left)", codes == [0, 0]
           and kind in ("r0", "r1") and not leftovers(real)
           and verify(real / "r").returncode == 0,
           f"exits {codes}, holds {kind}, left {leftovers(real)}")


# ------------------------------------------------------------------ paths and copies
def f49_odd_paths_moved():
    """A bundle and its result under ``Türme 2021/Station Ö 1`` (spaces, non-ASCII),
    the whole folder then moved and renamed to ``archive ☂ x``: verify, report, export
    --csv and diff pass on the moved copy."""
    parent = W / "Türme 2021"
    moved = W / "archive ☂ x"
    for p in (parent, moved):
        shutil.rmtree(p, ignore_errors=True)
    parent.mkdir()
    base = _own_bundle("Station Ö 1", parent)
    shutil.move(str(parent), str(moved))
    result = moved / base.name / "r"
    codes = [verify(result).returncode, fp("report", "--quiet", result).returncode,
             fp("export", "--csv", moved / "csv ü", result).returncode,
             fp("diff", result, W / "r0").returncode]
    record("a bundle and result on a path with spaces and umlauts, moved and renamed "
           "(expected: verify, report, export, diff 0)", codes == [0, 0, 0, 0],
           f"exits {codes}")


def f49_read_only_result():
    """A result made read-only (chmod -R a-w, as an archive copy): verify, report --out
    elsewhere, export --csv and --netcdf elsewhere, diff pass; report into it refused in
    one line naming the folder."""
    folder = fresh("ro49")
    fp("report", "--quiet", folder)
    for p in [folder, *folder.rglob("*")]:
        p.chmod(p.stat().st_mode & 0o555)
    env = dict(ENV)
    user = ["setpriv", "--reuid=65534", "--regid=65534", "--clear-groups"]
    out = W / "ro49_out"
    shutil.rmtree(out, ignore_errors=True)
    out.mkdir()
    out.chmod(0o777)
    (W).chmod(W.stat().st_mode | 0o755)

    def as_user(*args):
        return subprocess.run([*user, PY, "-m", "fluxpart", *map(str, args)], env=dict(
            env, HOME=str(out), TMPDIR=str(out), MPLCONFIGDIR=str(out)), cwd=out,
            capture_output=True, text=True, timeout=300)
    try:
        codes = [as_user("verify", "--quiet", folder).returncode,
                 as_user("report", "--quiet", folder, "--out", out / "page").returncode,
                 as_user("export", "--csv", out / "csv", folder).returncode,
                 as_user("export", "--netcdf", out / "x.nc", folder).returncode,
                 as_user("diff", folder, W / "r0").returncode]
        into = as_user("report", "--quiet", folder)
    finally:
        for p in [folder, *folder.rglob("*")]:
            p.chmod(p.stat().st_mode | 0o200)
    record("a read-only result (another user): verify, report --out, export, diff; "
           "report into it (expected: 0 0 0 0 0; one error line)",
           codes == [0, 0, 0, 0, 0] and one_line(into) and "ro49" in into.stderr,
           f"exits {codes}, report into it {into.returncode} {_tail(into)}")


def _tmpfs(where, size):
    where.mkdir(parents=True, exist_ok=True)
    return subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs",
                           str(where)], capture_output=True).returncode == 0


def f49_full_disk_export_report_out():
    """A real full disk (a 200 kB tmpfs) under export --csv and report --out: one
    ``error:`` line naming the disk's fullness, nothing left on it."""
    parent = W / "full49"
    subprocess.run(["umount", str(parent)], capture_output=True)
    shutil.rmtree(parent, ignore_errors=True)
    if not _tmpfs(parent, "200k"):
        record("a full disk under export --csv and report --out", False, "unprobed: no mount")
        return
    try:
        seen = []
        for args in (["export", "--csv", parent / "csv", W / "r0"],
                     ["report", "--quiet", W / "r0", "--out", parent / "page"]):
            done = fp(*args)
            seen.append((args[0], done.returncode, one_line(done),
                         sorted(p.name for p in parent.iterdir()), _tail(done, 100)))
    finally:
        subprocess.run(["umount", str(parent)])
    record("a full disk (200 kB tmpfs) under export --csv and report --out (expected: one "
           "line, exit 2, nothing left)", all(code == 2 and one and not left
                                             for _, code, one, left, _ in seen), f"{seen}")


_INJECT = r"""
import errno, os, sys
code, match = int(sys.argv[1]), sys.argv[2]
real = os.replace
def failing(src, dst, *a, **k):
    if match in os.fsdecode(dst):
        raise OSError(code, os.strerror(code), os.fsdecode(dst))
    return real(src, dst, *a, **k)
os.replace = failing
real_rename = os.rename
def failing_rename(src, dst, *a, **k):
    if match in os.fsdecode(dst):
        raise OSError(code, os.strerror(code), os.fsdecode(dst))
    return real_rename(src, dst, *a, **k)
os.rename = failing_rename
from fluxpart import cli
sys.exit(cli.main(sys.argv[3:]))
"""


def f49_enospc_report_netcdf():
    """ENOSPC injected as report puts report.html in place and as export --netcdf puts
    its file in place over an earlier one: one line, exit 2, the earlier page and file
    whole, nothing left."""
    import errno
    folder = fresh("nospc49")
    fp("report", "--quiet", folder)
    page = (folder / "report" / "report.html").read_bytes()
    target = W / "nospc49.nc"
    assert fp("export", "--netcdf", target, W / "r1").returncode == 0
    old = target.read_bytes()
    seen = []
    for match, args, intact in (
            ("report", ["report", "--quiet", folder],
             lambda: (folder / "report" / "report.html").read_bytes() == page),
            ("nospc49.nc", ["export", "--netcdf", target, W / "r0"],
             lambda: target.read_bytes() == old)):
        done = subprocess.run([PY, "-c", _INJECT, str(errno.ENOSPC), match, *map(str, args)],
                              env=ENV, cwd=W / "b", capture_output=True, text=True,
                              timeout=300)
        left = leftovers(W) + leftovers(folder) + [p.name for p in W.glob(".nospc49*")]
        seen.append((args[0], done.returncode, one_line(done), intact(), left,
                     _tail(done, 90)))
    record("ENOSPC injected as report and export --netcdf put their file in place "
           "(expected: one line, old whole, nothing left)",
           all(code == 2 and one and ok and not left for _, code, one, ok, left, _ in seen),
           f"{seen}")


def f49_mtimes_1970_and_before():
    """Every file of a result dated 1 Jan 1970 and 1 Jan 1960 (a negative time: a
    copy through a tool that lost the times, a camera card's FAT): verify, report and a
    run over it pass."""
    seen = []
    for stamp in (0, -315619200):
        folder = fresh("epoch49")
        for p in [*folder.rglob("*"), folder]:
            os.utime(p, (stamp, stamp), follow_symlinks=False)
        seen.append((stamp, verify(folder).returncode,
                     fp("report", "--quiet", folder).returncode,
                     fp("run", "site.toml", "--out", folder, "--quiet").returncode))
    record("a result's files dated 1970 and 1960 (expected: verify, report, run 0)",
           all(s[1:] == (0, 0, 0) for s in seen), f"{seen}")


def f49_zipped_elsewhere_renamed():
    """A bundle and its result zipped (``zip -r``), unpacked in another folder, the
    result folder renamed: verify 0 (the input found by its recorded relative path)."""
    base = _own_bundle("zipb49")
    box = W / "zipbox49"
    shutil.rmtree(box, ignore_errors=True)
    box.mkdir()
    subprocess.run(["zip", "-qr", box / "p.zip", "b", "r"], cwd=base, check=True)
    (box / "x").mkdir()
    subprocess.run(["unzip", "-q", box / "p.zip"], cwd=box / "x", check=True)
    (box / "x" / "r").rename(box / "x" / "result 2021")
    done = fp("verify", box / "x" / "result 2021", cwd=W)
    record("a bundle and result zipped, unpacked elsewhere, result renamed (expected: "
           "verify 0)", done.returncode == 0, f"exit {done.returncode}, {_said(done)}")


def f49_tables_resaved():
    """Tables re-saved by other Parquet writers (pyarrow zstd, no dictionary, format 2.6
    pages v2; pandas.to_parquet): verify exits 1 naming each file and saying its values
    equal the rerun's (pandas: fluxpart's metadata gone); report and export refuse the
    folder in one line naming the file (they draw only what was written)."""
    seen = []
    for label, code in (("zstd", "pq.write_table(pq.read_table(p), p, compression='zstd')"),
                        ("no dictionary", "pq.write_table(pq.read_table(p), p, "
                                          "use_dictionary=False)"),
                        ("pages v2", "pq.write_table(pq.read_table(p), p, version='2.6', "
                                     "data_page_version='2.0')"),
                        ("pandas", "pd.read_parquet(p).to_parquet(p)")):
        folder = fresh("resave49")
        subprocess.run([PY, "-c", "import sys, pandas as pd, pyarrow.parquet as pq\n"
                        f"p = sys.argv[1]\n{code}", folder / "daily.parquet"], env=ENV,
                       check=True)
        done = fp("verify", folder)
        named = "daily" in done.stdout and ("bit-identical to the rerun" in done.stdout
                                            or "rewritten by another program"
                                            in done.stdout)
        others = [fp("report", "--quiet", folder),
                  fp("export", "--csv", W / "resave49_csv", folder)]
        refused = all(one_line(o) and "daily.parquet" in o.stderr for o in others)
        seen.append((label, done.returncode, named, refused))
    record("tables re-saved by other Parquet writers (expected: verify 1 naming the file "
           "and its equal values; report, export one line naming it)",
           all(c == 1 and n and r for _, c, n, r in seen), f"{seen}")


def f49_report_stop_as_staging_appears():
    """SIGHUP, SIGTERM and SIGINT, two each, sent to report the moment its staging folder
    appears (a stop inside ``mkdtemp``, after the folder was made): exit 128 + the signal,
    the earlier page whole, no staging folder left in the result."""
    wrong = []
    for signum in (signal.SIGHUP, signal.SIGTERM, signal.SIGINT) * 2:
        folder = fresh("race49")
        fp("report", "--quiet", folder)
        page = (folder / "report" / "report.html").read_bytes()
        done = pf.stop_when(["report", "--quiet", folder], signum,
                            lambda folder=folder: any(".report.staging-" in p.name
                                                      for p in folder.iterdir()))
        left = leftovers(folder)
        if (done.returncode != 128 + signum or left
                or (folder / "report" / "report.html").read_bytes() != page):
            wrong.append((signal.Signals(signum).name, done.returncode, left))
    record("report stopped the moment its staging folder appears, 6 times (expected: "
           "128 + signal, page whole, nothing left)", not wrong, f"wrong {wrong}")


def f49_threads_one_and_two():
    """run with every thread pool at 2 (OMP, OpenBLAS, MKL, NumExpr) and at 1, and
    verify of the 1-thread result under 2 threads: tables byte-identical, verify 0."""
    two = dict(ENV, OMP_NUM_THREADS="2", OPENBLAS_NUM_THREADS="2", MKL_NUM_THREADS="2",
               NUMEXPR_NUM_THREADS="2")
    out = W / "threads49"
    shutil.rmtree(out, ignore_errors=True)
    run = fp("run", "site.toml", "--out", out, "--quiet", env=two)
    check = verify(W / "r0", env=two)
    record("run and verify with thread pools at 2 against 1 (expected: same bytes, "
           "verify 0)", run.returncode == 0 and check.returncode == 0
           and table_digests(out) == table_digests(W / "r0"),
           f"run {run.returncode}, verify {check.returncode}, same "
           f"{table_digests(out) == table_digests(W / 'r0')}")


# ------------------------------------------------------------------ the input after the run
def f49_input_renamed():
    """The input renamed after the run: verify names it missing in one line (exit 2);
    verify --input NEW passes."""
    base = _own_bundle("ren49")
    (base / "b" / "tower.csv").rename(base / "b" / "tower_2021.csv")
    gone = fp("verify", "--quiet", base / "r")
    given = fp("verify", "--quiet", base / "r", "--input", base / "b" / "tower_2021.csv")
    record("the input renamed after the run (expected: one line naming tower.csv; with "
           "--input 0)", one_line(gone) and "tower.csv" in gone.stderr
           and given.returncode == 0, f"{gone.returncode} {_tail(gone, 100)}, "
                                      f"--input {given.returncode}")


def f49_input_zipped_after_run():
    """The input archived after the run with ``zip -m tower.csv.zip tower.csv`` (the
    original deleted): verify takes the zip's one file where it has the recorded SHA-256
    (run reads a zip of one table), exit 0, saying so."""
    base = _own_bundle("zip49")
    subprocess.run(["zip", "-qm", "tower.csv.zip", "tower.csv"], cwd=base / "b", check=True)
    done = fp("verify", base / "r", cwd=W)
    record("the input zipped after the run, zip -m (expected: verify 0 naming the zip)",
           done.returncode == 0 and "tower.csv.zip" in done.stdout + done.stderr,
           f"exit {done.returncode}, {_said(done, 220)}")


def f49_input_windows_compressed_folder():
    """The input put in a Windows "compressed (zipped) folder" after the run: tower.zip
    holding tower.csv, the original deleted: verify 0 from the zip, saying so."""
    base = _own_bundle("wzip49")
    import zipfile
    with zipfile.ZipFile(base / "b" / "tower.zip", "w", zipfile.ZIP_DEFLATED) as archive:
        archive.write(base / "b" / "tower.csv", "tower.csv")
    (base / "b" / "tower.csv").unlink()
    done = fp("verify", base / "r", cwd=W)
    record("the input in a Windows compressed folder tower.zip (expected: verify 0 naming "
           "it)", done.returncode == 0 and "tower.zip" in done.stdout + done.stderr,
           f"exit {done.returncode}, {_said(done, 220)}")


def f49_input_zstd_after_run():
    """The input compressed with ``zstd --rm`` after the run (a format fluxpart does not
    unpack): verify's one line names tower.csv.zst beside it and how to unpack it."""
    if shutil.which("zstd") is None:
        record("the input zstd-compressed after the run", False, "unprobed: no zstd")
        return
    base = _own_bundle("zst49")
    subprocess.run(["zstd", "-q", "--rm", "tower.csv"], cwd=base / "b", check=True)
    done = fp("verify", "--quiet", base / "r", cwd=W)
    record("the input zstd-compressed after the run (expected: one line naming "
           "tower.csv.zst and zstd -d)", one_line(done) and "tower.csv.zst" in done.stderr
           and "zstd -d" in done.stderr, f"exit {done.returncode}, {_tail(done, 260)}")


def f49_input_edited_report_export():
    """The input edited after the run (one value): verify names the input (exit 1 or
    2); report and export, which read only the result, pass."""
    base = _own_bundle("edit49")
    path = base / "b" / "tower.csv"
    lines = path.read_text().splitlines(keepends=True)
    cells = lines[200].split(",")
    cells[1] = "9" + cells[1]
    lines[200] = ",".join(cells)
    path.write_text("".join(lines))
    done = fp("verify", "--quiet", base / "r", cwd=W)
    others = (fp("report", "--quiet", base / "r").returncode,
              fp("export", "--csv", base / "csv", base / "r").returncode)
    record("the input edited after the run (expected: verify names tower.csv; report, "
           "export 0)", done.returncode in (1, 2) and "tower.csv" in done.stdout + done.stderr
           and others == (0, 0), f"verify {done.returncode} {_said(done)}, others {others}")


def f49_symlinked_input():
    """The input a symbolic link into a data folder (the manifest records the file the
    link led to): that file edited in place makes verify name it (exit 1); put back and
    moved, with the link following it, verify either passes or names it missing in one
    line; restored at its place it passes."""
    base = W / "slink49"
    shutil.rmtree(base, ignore_errors=True)
    (base / "data").mkdir(parents=True)
    (base / "b").mkdir()
    target = base / "data" / "tower_v1.csv"
    shutil.copy2(W / "b" / "tower.csv", target)
    shutil.copy2(W / "b" / "site.toml", base / "b" / "site.toml")
    (base / "b" / "tower.csv").symlink_to(target)
    assert fp("run", "site.toml", "--out", base / "r", "--quiet", cwd=base / "b").returncode == 0
    original = target.read_bytes()
    text = original.decode().splitlines(keepends=True)
    cells = text[300].split(",")
    cells[1] = "7" + cells[1]
    text[300] = ",".join(cells)
    target.write_text("".join(text))
    edited = fp("verify", "--quiet", base / "r", cwd=W)
    target.write_bytes(original)
    (base / "archive").mkdir()
    target.rename(base / "archive" / "tower_v1.csv")
    (base / "b" / "tower.csv").unlink()
    (base / "b" / "tower.csv").symlink_to(base / "archive" / "tower_v1.csv")
    moved = fp("verify", "--quiet", base / "r", cwd=W)
    (base / "archive" / "tower_v1.csv").rename(target)
    back = fp("verify", "--quiet", base / "r", cwd=W)
    record("a symlinked input's file edited, moved with the link, put back (expected: 1 "
           "naming it; 0 or one line; 0)", edited.returncode == 1
           and "tower_v1.csv" in edited.stdout + edited.stderr
           and (moved.returncode == 0 or one_line(moved) and "tower_v1.csv" in moved.stderr)
           and back.returncode == 0,
           f"edited {edited.returncode} {_said(edited, 120)}, moved {moved.returncode} "
           f"{_said(moved, 120)}, back {back.returncode}")


# ------------------------------------------------------------------ tampering
def _changed_value(path, column_prefix="gpp", row=5, by=0.5):
    code = ("import sys, pyarrow as pa, pyarrow.parquet as pq\n"
            "p = sys.argv[1]; f = pq.ParquetFile(p); t = f.read()\n"
            f"i = [n.startswith({column_prefix!r}) for n in t.column_names].index(True)\n"
            "c = t.column(i).to_pylist()\n"
            f"c[{row}] = c[{row}] + {by}\n"
            "t = t.set_column(i, t.schema.field(i), pa.array(c, t.schema.field(i).type))\n"
            "pq.write_table(t.replace_schema_metadata(f.schema_arrow.metadata), p)\n"
            "print(t.column_names[i])")
    return subprocess.run([PY, "-c", code, path], env=ENV, capture_output=True, text=True,
                          check=True).stdout.strip()


def f49_tampered_value():
    """One value of daily.parquet changed (its metadata kept): verify exit 1 naming
    daily, the column and the date."""
    folder = fresh("tv49")
    column = _changed_value(folder / "daily.parquet")
    done = fp("verify", folder)
    record("one daily value changed (expected: exit 1 naming daily, the column, the date)",
           done.returncode == 1 and "daily" in done.stdout and column in done.stdout
           and "2021-01-06" in done.stdout, f"exit {done.returncode}, {done.stdout[:300]!r}")


def _resealed(folder, statement):
    subprocess.run([PY, "-c", RESEAL, folder, statement], env=ENV, check=True)


def f49_tampered_value_resealed():
    """One value of monthly.parquet changed and the manifest resealed (every SHA-256 and
    the seal recomputed, a forger's tool): verify exit 1 naming monthly and the column."""
    folder = fresh("tvr49")
    column = _changed_value(folder / "monthly.parquet", "reco", 0, 3.0)
    _resealed(folder, "pass")
    done = fp("verify", folder)
    record("a monthly value changed under a resealed manifest (expected: exit 1 naming "
           "monthly and the column)", done.returncode == 1 and "monthly" in done.stdout
           and column in done.stdout, f"exit {done.returncode}, {done.stdout[:300]!r}")


def f49_warning_deleted_resealed():
    """A warning deleted from a resealed manifest (a caution hidden from an auditor):
    verify exit 1 naming the warnings."""
    folder = fresh("warn49")
    _resealed(folder, "m['warnings'] = m['warnings'][1:]")
    done = fp("verify", folder)
    record("a warning deleted under a resealed manifest (expected: exit 1 naming "
           "warnings)", done.returncode == 1 and "warnings" in done.stdout,
           f"exit {done.returncode}, {done.stdout[:200]!r}")


def f49_input_changed_hash_resealed():
    """The input changed by one value and its SHA-256 in the manifest resealed to the new
    bytes (the forger makes the record name the new file): the rerun's tables differ;
    verify exit 1 naming a table."""
    base = _own_bundle("inres49")
    path = base / "b" / "tower.csv"
    lines = path.read_text().splitlines(keepends=True)
    for k in range(400, 440):
        cells = lines[k].split(",")
        cells[1] = str(float(cells[1]) + 5.0) if cells[1] not in ("-9999", "") else cells[1]
        lines[k] = ",".join(cells)
    path.write_text("".join(lines))
    import hashlib
    sha = hashlib.sha256(path.read_bytes()).hexdigest()
    _resealed(base / "r", f"m['provenance']['input']['sha256'] = {sha!r}")
    done = fp("verify", base / "r", cwd=W)
    record("the input changed and its SHA-256 resealed (expected: exit 1 naming a table)",
           done.returncode == 1 and (".parquet" in done.stdout or "daily" in done.stdout),
           f"exit {done.returncode}, {done.stdout[:240]!r}")


# ------------------------------------------------------------------ the clock
def f49_future_lock_and_leftovers():
    """A clock set back: the folder's lock file and a killed run's retired folder dated
    a year ahead: run replaces the result (exit 0), the retired folder swept, verify 0."""
    folder = fresh("fut49", "r1")
    lock = W / ".fut49.lock"
    lock.write_bytes(b"")
    retired = W / ".fut49.retired-ab12cd34"
    shutil.rmtree(retired, ignore_errors=True)
    shutil.copytree(W / "r1", retired)
    ahead = time.time() + 365 * 86400
    for p in (lock, retired):
        os.utime(p, (ahead, ahead))
    done = fp("run", "site.toml", "--out", folder, "--quiet")
    record("a lock file and retired folder dated a year ahead (expected: run 0, swept, "
           "verify 0)", done.returncode == 0 and not leftovers(W)
           and pf._whole_kind(folder, W / "r0") == "r0" and verify(folder).returncode == 0,
           f"exit {done.returncode} {_tail(done, 100)}, left {leftovers(W)}")


def f49_run_under_clock_back_then_verify():
    """run with the wall clock ten years back (time.time patched), then verify, report
    and diff under the real clock: 0, tables byte-identical to the run under the real
    clock."""
    site = W / "clock49"
    shutil.rmtree(site, ignore_errors=True)
    site.mkdir()
    (site / "sitecustomize.py").write_text(
        "import time\n_real = time.time\ntime.time = lambda: _real() - 10 * 365 * 86400\n")
    env = dict(ENV, PYTHONPATH=f"{site}{os.pathsep}{TREE}")
    out = W / "clock49_r"
    shutil.rmtree(out, ignore_errors=True)
    run = fp("run", "site.toml", "--out", out, "--quiet", env=env)
    written = json.loads((out / "run-log.json").read_text()).get("written_utc", "")
    codes = [run.returncode, verify(out).returncode, fp("report", "--quiet", out).returncode,
             fp("diff", out, W / "r0").returncode]
    record("run under a clock ten years back, verify/report/diff now (expected: 0s, same "
           "tables)", codes == [0, 0, 0, 0] and table_digests(out) == table_digests(W / "r0"),
           f"exits {codes}, written {written}")


def f49_readers_while_runs_swap():
    """export --csv, export --netcdf and diff, each looped while runs of two seeds replace
    the folder in turn (in the order they take its lock): every reader ends 0 or with
    one ``error:`` line, never a traceback; the folder holds one result whole; nothing is
    left beside the folder or the exports."""
    folder = fresh("swap49")
    runs = [start("run", f"{name}.toml", "--out", folder, "--quiet")
            for name in ("seed1", "site", "seed1")]
    seen, bad = [], []
    for k in range(4):
        shutil.rmtree(W / f"swap49_csv{k}", ignore_errors=True)   # an earlier pass's
        (W / f"swap49_{k}.nc").unlink(missing_ok=True)
        for label, args in (("csv", ["export", "--csv", W / f"swap49_csv{k}", folder]),
                            ("netcdf", ["export", "--netcdf", W / f"swap49_{k}.nc", folder]),
                            ("diff", ["diff", folder, W / "r0"])):
            done = fp(*args)
            seen.append(done.returncode)
            if "Traceback" in done.stderr or done.returncode not in (0, 1) and not one_line(
                    done):
                bad.append((label, done.returncode, _tail(done, 100)))
    codes = [p.communicate(timeout=600) and p.returncode for p in runs]
    left = leftovers(W) + sorted(p.name for p in W.glob(".swap49*"))
    record("export --csv/--netcdf and diff looped while runs replace the folder (expected: "
           "0 or one line each, nothing left)", not bad and codes == [0, 0, 0] and not left
           and pf._whole_kind(folder, W / "r0", W / "r1") in ("r0", "r1"),
           f"reader exits {seen}, bad {bad[:2]}, runs {codes}, left {left}, holds "
           f"{pf._whole_kind(folder, W / 'r0', W / 'r1')}")


FAULTS = [f49_scancel_grace, f49_sighup, f49_kill9_report_export_points,
          f49_kill9_netcdf_over_earlier, f49_batch_worker_sigterm,
          f49_two_runs_linked_parent, f49_odd_paths_moved, f49_read_only_result,
          f49_full_disk_export_report_out, f49_enospc_report_netcdf,
          f49_mtimes_1970_and_before, f49_zipped_elsewhere_renamed, f49_tables_resaved,
          f49_report_stop_as_staging_appears, f49_threads_one_and_two,
          f49_input_renamed, f49_input_zipped_after_run,
          f49_input_windows_compressed_folder, f49_input_zstd_after_run,
          f49_input_edited_report_export, f49_symlinked_input, f49_tampered_value,
          f49_tampered_value_resealed, f49_warning_deleted_resealed,
          f49_input_changed_hash_resealed, f49_future_lock_and_leftovers,
          f49_run_under_clock_back_then_verify, f49_readers_while_runs_swap]

if __name__ == "__main__":
    signal.signal(signal.SIGINT, signal.default_int_handler)
    wanted = [a for a in sys.argv[1:] if a.startswith("f49_")]
    if not (W / "r1").exists():
        pf.setup()
    for fault in FAULTS:
        if not wanted or fault.__name__ in wanted:
            fault()
    results = pf.results
    print(f"held {sum(r[1] for r in results)} of {len(results)} ({W})")
