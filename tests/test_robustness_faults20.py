"""Faults of round faults20: ``fluxpart batch`` worker options and site keys.

Outside references: Dask.distributed's ``LocalCluster`` (its ``n_workers`` argument,
one process per worker; each site is one task, so a worker beyond the number of
tasks never runs one: common practice); POSIX ``errno.EMFILE`` (too many open files)
and ``EAGAIN`` (fork: no more processes) as raised by the C library; the default file
systems of macOS (APFS, HFS+) and Windows (NTFS) compare names without case (m).
Invented Quillmoor towers (fictional) of :mod:`fluxpart.demo` only.
"""

import errno
from pathlib import Path

import pytest

pytest.importorskip("distributed")
dask_distributed = pytest.importorskip("dask.distributed")

from fluxpart import batch  # noqa: E402
from fluxpart.cli import main  # noqa: E402
from fluxpart.demo import write_example  # noqa: E402


def _sites(tmp_path: Path, count: int) -> Path:
    """A network file of `count` invented hourly towers (nothing computed)."""
    for number in range(count):
        written = write_example(tmp_path / "sites" / f"tower{number}", seed=number,
                                interval_minutes=60)
        written.rename(written.with_name(f"tower{number}.toml"))
    path = tmp_path / "SITES.toml"
    path.write_text('[batch]\nsites = ["sites/*/*.toml"]\nout = "out"\n', encoding="utf-8")
    return path


class _Started(Exception):
    """Raised by the stand-in cluster once it has seen its arguments."""


def test_no_more_local_workers_than_sites(tmp_path, monkeypatch):
    """``--workers 50`` for 2 sites starts 2 worker processes, not 50 (Dask LocalCluster
    ``n_workers``: one process each; a third worker would never get one of 2 tasks)."""
    seen = {}

    def stand_in(**kwargs):
        seen.update(kwargs)
        raise _Started

    monkeypatch.setattr(dask_distributed, "LocalCluster", stand_in)
    sites = _sites(tmp_path, 2)
    with pytest.raises(_Started):
        batch.run_batch(sites, workers=50)
    assert seen["n_workers"] == 2
    assert seen["threads_per_worker"] == 1
    seen.clear()
    with pytest.raises(_Started):
        batch.run_batch(sites, workers=1)
    assert seen["n_workers"] == 1
    # the pure rule: default 2, never above the sites, never below one
    assert batch.local_workers(None, 5) == 2
    assert batch.local_workers(None, 1) == 1
    assert batch.local_workers(7, 3) == 3
    assert batch.local_workers(1, 3) == 1


@pytest.mark.parametrize("code", [errno.EMFILE, errno.EAGAIN])
def test_a_local_cluster_that_cannot_start_is_one_error_line(tmp_path, monkeypatch, capsys,
                                                              code):
    """Out of file handles (EMFILE) or processes (EAGAIN, POSIX fork) while the workers
    start: one ``error:`` line naming --workers, exit 2, no traceback, no site folder."""
    def stand_in(**kwargs):
        raise OSError(code, "simulated")

    monkeypatch.setattr(dask_distributed, "LocalCluster", stand_in)
    sites = _sites(tmp_path, 2)
    assert main(["batch", str(sites), "--workers", "2", "--quiet"]) == 2
    captured = capsys.readouterr()
    lines = [line for line in captured.err.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("error:")
    assert "--workers" in lines[0] and "Traceback" not in captured.err
    out = tmp_path / "out"
    assert not any(entry.name.startswith("tower") for entry in out.iterdir())


def test_site_keys_differ_without_case(tmp_path):
    """``a/Fen.toml`` and ``b/fen.toml`` get keys that differ on a file system that
    ignores case (APFS, NTFS (m)); a site named like the failures table does too."""
    configs = []
    for folder, name in (("a", "Fen"), ("b", "fen"), ("c", "FAILURES")):
        (tmp_path / folder).mkdir()
        config = tmp_path / folder / f"{name}.toml"
        config.write_text("", encoding="utf-8")
        configs.append(config)
    path = tmp_path / "SITES.toml"
    path.write_text('[batch]\nsites = ["a/Fen.toml", "b/fen.toml", "c/FAILURES.toml"]\n',
                    encoding="utf-8")
    keys = [key for key, _ in batch.read_sites_file(path).sites]
    folded = [key.casefold() for key in keys]
    assert len(set(folded)) == 3
    assert keys[:2] == ["a-Fen", "b-fen"]
    # FAILURES is not the reserved name 'failures.parquet'; a stem equal to it in another
    # case is moved off it
    assert batch._site_keys([tmp_path / "x" / "Failures.parquet.toml"])[0].casefold() \
        != batch.FAILURES_FILE.casefold()


# --------------------------------------------------------------------------- export

def test_export_of_an_older_result_names_the_release_that_computed_it(written_demo, tmp_path,
                                                                      monkeypatch, capsys):
    """CF-1.10 section 2.6.2: ``source`` is "the method of production of the original
    data", ``history`` the audit trail of changes. A result folder computed by one
    release and exported by a later one (simulated by raising the exporter's version)
    keeps the computing release as ``source`` and names the export in ``history`` (a
    result exported by the release that computed it names that release once there);
    read back with xarray (a general-purpose library)."""
    xr = pytest.importorskip("xarray")
    import fluxpart
    from fluxpart.manifest import read_manifest

    _, folder = written_demo
    computed = read_manifest(folder)["versions"]["fluxpart"]
    same = tmp_path / "same.nc"
    assert main(["export", str(folder), "--netcdf", str(same)]) == 0
    with xr.open_dataset(same) as dataset:
        assert dataset.attrs["source"] == f"fluxpart {computed}"
        # computed and exported by one release: it is named once (round modeller26)
        assert dataset.attrs["history"].count(f"fluxpart {computed}") == 1
    monkeypatch.setattr(fluxpart, "__version__", "99.0.0")
    later = tmp_path / "later.nc"
    assert main(["export", str(folder), "--netcdf", str(later)]) == 0
    with xr.open_dataset(later) as dataset:
        assert dataset.attrs["source"] == f"fluxpart {computed}"
        assert "fluxpart 99.0.0" in dataset.attrs["history"]
        assert f"fluxpart {computed}" in dataset.attrs["history"]
    from fluxpart.export import to_xarray, written_by_fluxpart

    assert to_xarray(folder).attrs["source"] == f"fluxpart {computed}"
    # the later release still recognises its own export and may replace it
    assert written_by_fluxpart(later)
    assert main(["export", str(folder), "--netcdf", str(later)]) == 0
    capsys.readouterr()


def _fake_batch_output(tmp_path: Path) -> Path:
    """A batch output folder's shape: the seal and one Hive-style partition (``site=<key>``)
    of each network dataset, holding a real Parquet file written by pyarrow."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    out = tmp_path / "network-output"
    for name in ("network_annual", "network_monthly", "network_daily"):
        (out / name / "site=tower0").mkdir(parents=True)
        pq.write_table(pa.table({"year": [2021]}), out / name / "site=tower0" / "part-0.parquet")
    (out / batch.NETWORK_SEAL).write_text("{}", encoding="utf-8")
    return out


@pytest.mark.parametrize("inside", ["network_annual/fen.nc",
                                    "network_daily/site=tower0/fen.nc"])
def test_export_refuses_a_network_table_folder(written_demo, tmp_path, capsys, inside):
    """A NetCDF put into a batch's network dataset folder would be deleted by the next
    batch (the folder is replaced whole) and, until then, breaks ``pandas.read_parquet``
    and ``pyarrow.dataset`` of the folder (pyarrow: "Parquet magic bytes not found"):
    one ``error:`` line, exit 2, nothing written; a file beside the datasets is fine."""
    pytest.importorskip("xarray")
    import pyarrow.dataset as ds

    _, folder = written_demo
    out = _fake_batch_output(tmp_path)
    target = out / inside
    assert main(["export", str(folder), "--netcdf", str(target)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error:") and "network table folder" in err
    assert not target.exists()
    # the documented reader still reads the dataset (pyarrow, Hive partitioning)
    assert ds.dataset(out / "network_annual", partitioning="hive").to_table().num_rows == 1
    beside = out / "fen.nc"
    assert main(["export", str(folder), "--netcdf", str(beside)]) == 0
    assert beside.is_file()


def test_report_and_run_refuse_a_network_table_folder(written_demo, tmp_path, capsys):
    """``report --out`` and ``run --out`` inside a network dataset folder: one ``error:``
    line each, exit 2, nothing written there (the next batch would delete it)."""
    _, folder = written_demo
    out = _fake_batch_output(tmp_path)
    page = out / "network_monthly" / "page"
    assert main(["report", str(folder), "--out", str(page), "--quiet"]) == 2
    assert "network table folder" in capsys.readouterr().err
    assert not page.exists()
    assert batch.enclosing_network_dataset(out / "network_daily" / "x" / "y") == \
        (out / "network_daily").resolve()
    assert batch.enclosing_network_dataset(out / "fen") is None
    # a real site config: an empty one is refused as empty first (round faults46)
    site = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"
    result = out / "network_annual" / "run"
    assert main(["run", str(site), "--out", str(result)]) == 2
    assert not result.exists()
    assert "network table folder" in capsys.readouterr().err


def test_folders_of_sites_no_longer_listed_are_named(tmp_path):
    """A site removed from the network file keeps its earlier result folder, which the
    network tables leave out: the batch names it (known truth on invented folders: two
    listed, one unlisted result folder, one plain user folder and one hidden staging
    folder, which are not result folders)."""
    out = _fake_batch_output(tmp_path)
    for name in ("tower0", "tower1", "tower2", ".tower3.staging-abcd1234"):
        (out / name).mkdir()
        (out / name / "manifest.json").write_text("{}", encoding="utf-8")
    (out / "notes").mkdir()
    warnings = batch.unlisted_site_folders(out, ["tower0", "tower1"])
    assert len(warnings) == 1 and "'tower2'" in warnings[0]
    assert "tower0" not in warnings[0] and "notes" not in warnings[0]
    assert "staging" not in warnings[0]
    assert batch.unlisted_site_folders(out, ["tower0", "tower1", "tower2"]) == []
    assert batch.unlisted_site_folders(tmp_path / "absent", ["tower0"]) == []
