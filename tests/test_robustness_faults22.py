"""Faults in the CSV export and the batch paths (round faults22).

Contracts (README "Command line", DESIGN §7): a genuine result verifies wherever it is
moved; nothing is ever half-written; a user error is one ``error:`` line, exit 2, no
traceback. External facts used: a file name is at most 255 bytes on ext4, XFS, APFS and
NTFS (``NAME_MAX``; common practice); ``rename(2)`` onto a directory that is not empty
fails with ``ENOTEMPTY`` or ``EEXIST`` and the top folder of a mounted file system
cannot be removed or renamed onto (``EBUSY``) (Linux man-pages rename(2), rmdir(2) (m)).
"""

import errno
import os
import shutil
import threading

import pytest
from bundles import make_bundle

from fluxpart import export_csv, resultdir
from fluxpart.cli import main
from fluxpart.errors import InputFileError
from fluxpart.pipeline import process_site_config


@pytest.fixture(scope="module")
def bundle(tmp_path_factory):
    """A bundle with a declared event: site config, input and result folder `out`."""
    root = tmp_path_factory.mktemp("bundle")
    config = make_bundle(root, extra='events = ["2021-01-15"]\n')
    process_site_config(config).write(root / "out")
    return root


@pytest.fixture(scope="module")
def reference(bundle, tmp_path_factory):
    """The CSV export of the bundle's result written the ordinary way."""
    target = tmp_path_factory.mktemp("reference") / "csv"
    export_csv.write_csv(bundle / "out", target)
    return {p.name: p.read_bytes() for p in target.iterdir()}


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def _leftovers(folder):
    return [p.name for p in folder.iterdir() if p.name.endswith(".tmp")]


def test_a_csv_folder_named_near_the_name_limit_is_written(bundle, reference, tmp_path,
                                                           capsys):
    """A 250-byte folder name is legal (NAME_MAX 255 bytes, common practice), but its
    staging folder '.NAME.xxxxxxxx.tmp' is 14 bytes longer: the export was refused with
    "cannot write in ... (File name too long); choose a writable place", of a writable
    place. The staging folder now takes a short name; the folder is written whole."""
    name = "x" * 248 + "é"                           # 248 + 2 = 250 bytes in UTF-8
    assert len(os.fsencode(name)) == 250
    target = tmp_path / name
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 0
    assert {p.name: p.read_bytes() for p in target.iterdir()} == reference
    assert _leftovers(tmp_path) == []


def test_a_killed_export_of_a_long_name_is_swept(bundle, tmp_path):
    """The short staging name of a long target is swept by the next export like the
    ordinary one (a killed export's folder must not stay for ever)."""
    name = "y" * 250
    stem = export_csv._staging_stem(name, tmp_path)
    assert stem != name and len(stem) + 14 <= 255
    stale = tmp_path / f".{stem}.abcdefgh.tmp"
    stale.mkdir()
    os.utime(stale, (1_000_000_000, 1_000_000_000))      # written long before
    export_csv.write_csv(bundle / "out", tmp_path / name)
    assert not stale.exists() and _leftovers(tmp_path) == []


def test_a_mount_point_as_csv_target_is_named(bundle, tmp_path, monkeypatch, capsys):
    """The empty top folder of a USB stick or a mounted share cannot be removed or renamed
    onto (EBUSY, rmdir(2) (m)): the export wrote every file beside it, then failed with
    "writing failed (Device or resource busy) ... free space". The mount point is now
    named before anything is written, with a folder inside it to give instead."""
    target = tmp_path / "stick"
    target.mkdir()
    real = os.path.ismount
    monkeypatch.setattr(export_csv.os.path, "ismount",
                        lambda p: os.path.abspath(p) == str(target) or real(p))
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 2
    line = _one_error_line(capsys)
    assert "mounted drive" in line and "stick/fluxpart-csv" in line and "free space" not in line
    assert list(target.iterdir()) == [] and _leftovers(tmp_path) == []


def test_a_symbolic_link_as_csv_target_is_named_as_a_link(bundle, tmp_path, capsys):
    """A link to an empty folder was refused as "exists and is not a folder" (it is a
    link to one): renaming the export onto it would replace the link, so it stays
    refused, now said as it is."""
    (tmp_path / "elsewhere").mkdir()
    (tmp_path / "link").symlink_to(tmp_path / "elsewhere")
    assert main(["export", str(bundle / "out"), "--csv", str(tmp_path / "link")]) == 2
    assert "symbolic link" in _one_error_line(capsys)
    assert (tmp_path / "link").is_symlink() and list((tmp_path / "elsewhere").iterdir()) == []


def test_an_export_overtaken_by_another_says_so(bundle, reference, tmp_path, monkeypatch,
                                                capsys):
    """Two exports into one new folder: the one renamed second fails (rename(2) onto a
    folder that is not empty: ENOTEMPTY (m)). It said "writing failed (Directory not
    empty); nothing was written: free space"; now it names the other writer. The
    folder is the first export's, whole."""
    target = tmp_path / "csv"
    real = os.rename

    def overtaken(source, destination):
        shutil.copytree(source, destination)            # the other export, first
        return real(source, destination)

    monkeypatch.setattr(export_csv.os, "rename", overtaken)
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 2
    line = _one_error_line(capsys)
    assert "another process" in line and "free space" not in line
    assert {p.name: p.read_bytes() for p in target.iterdir()} == reference
    assert _leftovers(tmp_path) == []


def test_a_folder_replaced_at_every_read_is_refused_not_returned_mixed(bundle, monkeypatch):
    """A result folder swapped for another while its tables are read is read again; the
    third try returned its tables even when the folder had changed again meanwhile,
    so the tables could come from two results. Known truth: an identity that changes
    at every look must end in the refusal 'kept changing while being read'."""
    counter = iter(range(10**6))
    monkeypatch.setattr(resultdir, "_identity", lambda directory: (0, next(counter)))
    with pytest.raises(InputFileError, match="kept changing"):
        resultdir.read_folder(bundle / "out")



# --------------------------------------------------------------------------- batch

def _network(root, names, extra=""):
    """Network file over tiny bundles (5 days: only their failure or hang matters here)."""
    for name in names:
        make_bundle(root / name, records=24 * 2 * 5, name=f"{name}.toml")
    sites = ", ".join(f'"{n}/{n}.toml"' for n in names)
    (root / "SITES.toml").write_text(f'[batch]\nsites = [{sites}]\nout = "res"\n{extra}',
                                     encoding="utf-8")
    return root / "SITES.toml"


_RELEASE = threading.Event()


def _hanging_site(key, config, directory, *, force=False):
    """A batch task standing in for run_site: the site 'hung' waits (up to 60 s)."""
    from fluxpart import batch

    if key == "hung":
        _RELEASE.wait(60)
        raise RuntimeError("the hang ended: the limit did not stop the batch")
    return batch._failure({"key": key, "config": config, "directory": directory},
                          ValueError("not computed in this test"))


def test_a_hung_site_fails_after_the_site_time_limit(tmp_path, monkeypatch):
    """A site that never ends (an input on a network share that stopped answering) kept
    the batch waiting for ever: there was no per-site limit. Known truth on invented
    sites: a site held for 60 s fails after a 0.04-min (2.4 s) limit, named with the
    limit, while the other site is unaffected; the batch ends long before the hang."""
    import time

    import distributed

    from fluxpart import batch

    real = batch.run_site
    sites = _network(tmp_path, ["hung", "quick"])
    monkeypatch.setattr(batch, "run_site", _hanging_site)
    _RELEASE.clear()
    try:
        with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                      dashboard_address=None) as cluster:
            began = time.monotonic()
            report = batch.run_batch(sites, scheduler=cluster.scheduler_address,
                                     site_time_limit=0.04)
            took = time.monotonic() - began
            _RELEASE.set()                     # the cluster's thread may end now
    finally:
        _RELEASE.set()
        monkeypatch.setattr(batch, "run_site", real)
    outcomes = {o.key: o for o in report.outcomes}
    assert outcomes["hung"].status == "failed" and outcomes["hung"].kind == "input"
    assert outcomes["hung"].error == "SiteTimeLimitError"
    assert "0.04 min" in outcomes["hung"].message
    assert outcomes["quick"].message == "not computed in this test"
    assert 2.4 <= took < 30


def test_the_site_time_limit_is_a_setting_with_a_default(tmp_path, capsys):
    """``[batch] site_time_limit`` [min] is read, defaults to four hours and is refused
    (one line, exit 2) where it is no positive number."""
    from fluxpart import batch

    sites = _network(tmp_path, ["alder"])
    assert batch.read_sites_file(sites).site_time_limit == 240.0
    sites = _network(tmp_path, ["alder"], "site_time_limit = 90\n")
    assert batch.read_sites_file(sites).site_time_limit == 90.0
    for bad in ("0", "-5", '"2h"', "nan", "true"):
        sites = _network(tmp_path, ["alder"], f"site_time_limit = {bad}\n")
        assert main(["batch", str(sites), "--quiet"]) == 2
        assert "site_time_limit" in _one_error_line(capsys)
    assert not (tmp_path / "res").exists()
    sites = _network(tmp_path, ["alder"])
    assert main(["batch", str(sites), "--quiet", "--site-time-limit", "0"]) == 2
    assert "--site-time-limit" in _one_error_line(capsys)


def test_a_site_whose_worker_dies_each_time_is_one_line_without_a_trace(tmp_path, capsys,
                                                                        monkeypatch):
    """A site whose worker process is killed at every try (the kernel's OOM killer, a
    crash of native code) ends in Dask's ``KilledWorker`` after its retries. The batch
    printed the client's traceback of it (and the scheduler's ERROR log lines): now the
    site's one ``error:`` line names the worker's death and what to do, no trace."""
    from distributed.scheduler import KilledWorker

    from fluxpart import batch

    worker = type("WorkerState", (), {"address": "tcp://127.0.0.1:1"})()
    error = KilledWorker("fluxpart-site-cedar-0", worker, 3)
    common = {"key": "cedar", "config": str(tmp_path / "cedar.toml"),
              "directory": str(tmp_path / "res" / "cedar")}
    outcome = batch._lost_site(batch._failure(common, error), error)
    assert outcome.status == "failed" and outcome.traceback == ""
    assert outcome.error == "WorkerLostError" and "fewer --workers" in outcome.message
    # any other failure is left as it was
    other = ValueError("x")
    assert batch._lost_site(batch._failure(common, other), other).error == "ValueError"

    sites = _network(tmp_path, ["cedar"])
    report = batch.BatchReport(out=tmp_path / "res", outcomes=(outcome,), network=None,
                               failures=None, warnings=())
    monkeypatch.setattr(batch, "run_batch", lambda *a, **k: report)
    monkeypatch.setattr(batch, "_summary", lambda r: "summary")
    args = type("Args", (), {"sites": sites, "quiet": True, "scheduler": None,
                             "workers": None, "out": None, "force": False,
                             "site_time_limit": None})()
    assert batch.command_batch(args) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: site 'cedar'") \
        and "WorkerLostError" in err[0]


def test_a_file_size_limit_during_the_csv_export_is_named(bundle, tmp_path, monkeypatch,
                                                         capsys):
    """``ulimit -f`` (a batch system's or a shell's file-size limit) makes a write fail
    with EFBIG, "File too large" (Python ignores SIGXFSZ; setrlimit(2) (m)): the export
    told the user to free space, which does not help. Now the limit is named; nothing
    is written."""
    real = open

    def limited(path, mode="r", *args, **kwargs):
        handle = real(path, mode, *args, **kwargs)
        if "w" in mode and str(path).endswith("daily.csv"):
            handle.close()
            raise OSError(errno.EFBIG, os.strerror(errno.EFBIG))
        return handle

    monkeypatch.setattr("builtins.open", limited)
    assert main(["export", str(bundle / "out"), "--csv", str(tmp_path / "csv")]) == 2
    line = _one_error_line(capsys)
    assert "ulimit -f" in line and "free space" not in line
    assert not (tmp_path / "csv").exists() and _leftovers(tmp_path) == []


# --------------------------------------------------------------------------- NetCDF

def test_a_netcdf_export_onto_a_full_disk_is_one_line(bundle, tmp_path):
    """A NetCDF export onto a file system that fills up mid-file (a 200 kB tmpfs; the
    demo month's file is ~400 kB): the HDF5 library failing its writes (ENOSPC) printed
    ~150 lines of h5py tracebacks and crashed the interpreter with SIGSEGV in 3 of 4
    tries (exit 139), leaving its temporary file. Now one ``error:`` line, exit 2,
    nothing left. Needs root to mount the tmpfs (skipped otherwise)."""
    import subprocess
    import sys

    small = tmp_path / "small"
    small.mkdir()
    mounted = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=200k", "tmpfs", str(small)],
                             capture_output=True)
    if mounted.returncode != 0:
        pytest.skip("cannot mount a small tmpfs here (needs root)")
    try:
        for _ in range(3):
            done = subprocess.run([sys.executable, "-m", "fluxpart", "export",
                                   str(bundle / "out"), "--netcdf", str(small / "x.nc")],
                                  capture_output=True, text=True, timeout=300,
                                  env={**os.environ, "PYTHONWARNINGS": "ignore"})
            lines = done.stderr.strip().splitlines()
            assert done.returncode == 2, done.stderr[-1500:]
            assert len(lines) == 1 and "No space left on device" in lines[0], lines[:5]
            assert list(small.iterdir()) == []
    finally:
        subprocess.run(["umount", str(small)], check=False)


def test_the_netcdf_made_in_memory_holds_what_a_direct_write_holds(bundle, tmp_path):
    """The file is now made in memory and then written: read back with xarray it is
    identical (values, attributes, encodings as decoded) to the same dataset written
    by xarray straight to a path (xarray ``Dataset.identical``)."""
    import xarray as xr

    from fluxpart.export import to_xarray, write_netcdf
    from fluxpart.result import load

    write_netcdf(bundle / "out", tmp_path / "export.nc")
    dataset = to_xarray(load(bundle / "out"))
    from fluxpart.export import _computed_by, _credit, _linked

    # the folder's links to its manifest (seal, seed, hashes) as the export writes them
    # (round auditor53: an export from a folder carries them)
    _linked(_credit(dataset, _computed_by(bundle / "out")), bundle / "out")
    dataset.to_netcdf(tmp_path / "direct.nc", engine="h5netcdf", format="NETCDF4")
    with xr.open_dataset(tmp_path / "export.nc", engine="h5netcdf") as exported, \
            xr.open_dataset(tmp_path / "direct.nc", engine="h5netcdf") as direct:
        assert exported.identical(direct)
        assert len(exported.data_vars) > 40


def test_a_csv_folder_name_over_the_limit_is_named_as_such(bundle, tmp_path, capsys):
    """A 256-byte folder name (NAME_MAX 255 bytes, common practice; 128 two-byte
    characters in UTF-8) was refused naming the path '.../manifest.json' that the
    command probed inside it; now the name, its length in bytes and the limit."""
    name = "é" * 128
    assert main(["export", str(bundle / "out"), "--csv", str(tmp_path / name)]) == 2
    line = _one_error_line(capsys)
    assert "256 bytes" in line and "255" in line and "manifest.json" not in line
    assert list(tmp_path.iterdir()) == []
