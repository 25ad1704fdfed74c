"""Tests of fluxpart.batch: many sites on Dask (issue "Many sites on Dask: fluxpart batch").

The sites are the invented Quillmoor towers of :mod:`fluxpart.demo` (hourly records,
a shortened u* bootstrap) to keep each site under a second. Clusters listen on
127.0.0.1 only and are shut down by the test that started them. The references
outside the project are: ``fluxpart run`` on the same config for the per-site
folders, :mod:`hashlib` SHA-256 for the manifest hashes, and :mod:`pyarrow.dataset`
reading the Hive-style partitioned network table (``site=<key>/`` folders, common
practice of Arrow readers).
"""

import hashlib
import io
import json
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

distributed = pytest.importorskip("distributed")

import pyarrow.dataset as ds  # noqa: E402
import pyarrow.parquet as pq  # noqa: E402

from fluxpart import batch  # noqa: E402
from fluxpart.cli import main  # noqa: E402
from fluxpart.demo import write_example  # noqa: E402
from fluxpart.errors import ConfigError, InputFileError  # noqa: E402
from fluxpart.store import read_table  # noqa: E402

REPOSITORY = Path(__file__).resolve().parent.parent
SEEDS = {"tower0": (0, "c3"), "tower1": (1, "c4"), "tower2": (2, "c3")}


def _write_tower(directory: Path, name: str, seed: int, variant: str) -> Path:
    """Write an hourly invented tower with a short u* bootstrap; return its config."""
    written = write_example(directory / name, seed=seed, variant=variant, interval_minutes=60)
    config = written.with_name(f"{name}.toml")
    config.write_text(written.read_text(encoding="utf-8") + "ustar_bootstrap_draws = 10\n",
                      encoding="utf-8")
    written.unlink()
    return config


def _write_bad_tower(directory: Path, good: Path) -> Path:
    """A site config whose column map names a column the file does not have."""
    text = good.read_text(encoding="utf-8")
    csv_name = text.split('path = "', 1)[1].split('"', 1)[0]
    csv_path = (good.parent / csv_name).resolve().as_posix()
    text = text.replace(f'path = "{csv_name}"', f'path = "{csv_path}"')
    text = text.replace('nee = "co2_exchange"', 'nee = "co2_flux_nowhere"')
    (directory / "broken").mkdir(parents=True, exist_ok=True)
    config = directory / "broken" / "broken.toml"
    config.write_text(text, encoding="utf-8")
    return config


def _readme_block(heading: str) -> str:
    """The first Python block of README.md after the paragraph that starts with `heading`."""
    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    after = text[text.index(heading):]
    return after.split("```python\n", 1)[1].split("```", 1)[0]


def _network_file(directory: Path, sites, out="network-output") -> Path:
    listed = ", ".join(f'"{s}"' for s in sites)
    path = directory / "SITES.toml"
    path.write_text(f'[batch]\nsites = [{listed}]\nout = "{out}"\n', encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def towers(tmp_path_factory):
    """Three good invented towers in their own folders under ``sites/``."""
    root = tmp_path_factory.mktemp("network")
    configs = {name: _write_tower(root / "sites", name, seed, variant)
               for name, (seed, variant) in SEEDS.items()}
    return root, configs


@pytest.fixture(scope="module")
def cluster():
    """A local Dask cluster of two worker processes on 127.0.0.1, shut down afterwards."""
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as local:
        yield local


def _snapshot(directory: Path) -> dict:
    """Relative path -> (bytes, modification time [ns]) of every file below `directory`."""
    return {str(p.relative_to(directory)): (p.read_bytes(), p.stat().st_mtime_ns)
            for p in sorted(directory.rglob("*")) if p.is_file()}


# --------------------------------------------------------------------------- the network file

def test_read_sites_file_expands_sorted_globs_and_makes_unique_keys(tmp_path):
    """Globs are relative to the file and sorted; duplicate stems get their folder's name."""
    for folder in ("b", "a"):
        (tmp_path / "towers" / folder).mkdir(parents=True)
        (tmp_path / "towers" / folder / "tower.toml").write_text("", encoding="utf-8")
    (tmp_path / "towers" / "a" / "notes.txt").write_text("", encoding="utf-8")
    (tmp_path / "fen site.toml").write_text("", encoding="utf-8")
    path = _network_file(tmp_path, ["towers/*/*", "fen site.toml", "towers/a/tower.toml"],
                         out="results")
    network = batch.read_sites_file(path)
    assert network.out == tmp_path.resolve() / "results"
    assert [key for key, _ in network.sites] == ["a-tower", "b-tower", "fen_site"]
    assert [config for _, config in network.sites] == [
        (tmp_path / "towers/a/tower.toml").resolve(), (tmp_path / "towers/b/tower.toml").resolve(),
        (tmp_path / "fen site.toml").resolve()]


def test_read_sites_file_default_out_is_beside_the_file(tmp_path):
    """Without ``out`` the output folder is ``<stem>-output`` beside the network file."""
    (tmp_path / "x.toml").write_text("", encoding="utf-8")
    (tmp_path / "towers.toml").write_text('[batch]\nsites = ["x.toml"]\n', encoding="utf-8")
    assert batch.read_sites_file(tmp_path / "towers.toml").out == tmp_path.resolve() / \
        "towers-output"


@pytest.mark.parametrize("text, match", [
    ('[batch]\nsite = ["x.toml"]\n', r"\[batch\] site: unknown setting; did you mean 'sites'"),
    ('[bacth]\nsites = ["x.toml"]\n', r"unknown table \[bacth\]; did you mean 'batch'"),
    ('[batch]\nout = "o"\n', r"\[batch\] sites is missing"),
    ('[batch]\nsites = []\n', r"expected a non-empty list"),
    ('[batch]\nsites = ["towers/*.toml"]\n', r"sites\[0\] = 'towers/\*.toml' matches no .toml"),
    ('[batch]\nsites = ["x.toml", "nowhere.toml"]\n', r"sites\[1\] = 'nowhere.toml': no such"),
    ('[batch]\nsites = ["x.toml"]\nout = 3\n', r"\[batch\] out = 3"),
    ('[batch\n', r"not valid TOML"),
])
def test_read_sites_file_rejects_bad_files(tmp_path, text, match):
    """Unknown keys suggest the nearest valid one; an empty match or missing file is named."""
    (tmp_path / "x.toml").write_text("", encoding="utf-8")
    (tmp_path / "SITES.toml").write_text(text, encoding="utf-8")
    with pytest.raises(ConfigError, match=match):
        batch.read_sites_file(tmp_path / "SITES.toml")


def test_bad_network_file_exits_2(tmp_path, capsys):
    """A bad SITES.toml (or a missing one) is a user error: exit status 2, one line."""
    (tmp_path / "SITES.toml").write_text('[batch]\nsites = ["none/*.toml"]\n', encoding="utf-8")
    assert main(["batch", str(tmp_path / "SITES.toml"), "--quiet"]) == 2
    assert "matches no .toml file" in capsys.readouterr().err
    with pytest.raises(InputFileError, match="does not exist"):
        batch.read_sites_file(tmp_path / "missing.toml")


def test_a_site_config_given_to_batch_names_fluxpart_run(tmp_path):
    """`fluxpart batch site.toml` said "unknown table [site]; valid settings: batch"
    (review43); a site config is named as one, with the command that takes it."""
    site = REPOSITORY / "examples" / "quillmoor_grassland.toml"
    with pytest.raises(ConfigError, match=r"is a site config, not a network file: process "
                                          r"it with fluxpart run .*quillmoor_grassland\.toml"):
        batch.read_sites_file(site)

def test_example_network_file_lists_the_example_sites():
    """examples/network.toml parses and names the four invented example towers."""
    network = batch.read_sites_file(REPOSITORY / "examples" / "network.toml")
    assert [key for key, _ in network.sites] == [
        "quillmoor_grassland", "east_meadow", "north_meadow", "south_maize"]
    assert all(config.is_file() for _, config in network.sites)


@pytest.mark.parametrize("extra, match", [
    (["--workers", "0"], r"--workers 0: expected a whole number >= 1"),
    (["--workers", "2", "--scheduler", "tcp://127.0.0.1:9"], r"--workers applies to the local"),
])
def test_bad_worker_options_exit_2(towers, tmp_path, capsys, extra, match):
    """Worker options are checked before any cluster starts, and before the output folder
    is made (review 6: each left an empty new folder behind)."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    assert main(["batch", str(sites), "--quiet", *extra]) == 2
    assert pd.Series([capsys.readouterr().err]).str.contains(match).all()
    assert not (tmp_path / "network-output").exists()


def test_missing_dask_is_one_error_line_and_no_folder(towers, tmp_path, capsys, monkeypatch):
    """Without the batch extra: one ``error:`` line naming the install, exit 2, no output
    folder (Python's import system: a ``None`` entry in ``sys.modules`` makes the import
    raise ImportError, the state of an environment without Dask)."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    assert main(["batch", str(sites), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: fluxpart batch needs Dask") and err.count("\n") == 1
    # the extra from the checkout, not by the bare name, which is another project on the
    # package index (review46)
    from fluxpart.install_hints import install_command
    assert install_command("batch") in err and not (tmp_path / "network-output").exists()
    assert "'fluxpart[batch]'" not in err and '"fluxpart[batch]"' not in err


def test_unreachable_scheduler_is_a_clear_error(towers, tmp_path, monkeypatch):
    """A scheduler address where nothing listens gives a ConfigError naming it."""
    monkeypatch.setattr(batch, "_CONNECT_TIMEOUT_SECONDS", 1)
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    with pytest.raises(ConfigError, match=r"--scheduler 'tcp://127.0.0.1:9': no Dask scheduler"):
        batch.run_batch(sites, scheduler="tcp://127.0.0.1:9")


# --------------------------------------------------------------------------- one site

def test_run_site_reports_failures_instead_of_raising(towers, tmp_path, monkeypatch):
    """A bad input is an 'input' failure, an unwritable result an 'output' one; any other
    exception an 'internal' one with traceback."""
    root, configs = towers
    bad = _write_bad_tower(tmp_path, configs["tower0"])
    outcome = batch.run_site("broken", bad, tmp_path / "out" / "broken")
    assert (outcome.status, outcome.kind, outcome.error) == ("failed", "input",
                                                             "MissingColumnError")
    assert "co2_flux_nowhere" in outcome.message
    assert not (tmp_path / "out").exists()

    # review 6: a header-only file's private error class (_EmptyFileError) stood in the
    # failures table and on stderr; the public class the README documents is named
    empty = tmp_path / "empty"
    empty.mkdir()
    config = empty / "empty.toml"
    text = configs["tower0"].read_text(encoding="utf-8")
    csv_name = text.split('path = "', 1)[1].split('"', 1)[0]
    config.write_text(text, encoding="utf-8")
    original = (configs["tower0"].parent / csv_name).read_text(encoding="utf-8")
    (empty / csv_name).write_text(original.splitlines()[0] + "\n", encoding="utf-8")
    outcome = batch.run_site("empty", config, tmp_path / "out" / "empty")
    assert (outcome.kind, outcome.error) == ("input", "InputFileError")
    assert outcome.note.startswith("InputFileError: ") and "no records" in outcome.message

    # faults36: a full disk while writing was recorded as the site's 'input' failure
    def disk_full(path):
        from fluxpart.errors import OutputError
        raise OutputError("writing the result folder failed: No space left on device")

    monkeypatch.setattr("fluxpart.pipeline.process_site_config", disk_full)
    outcome = batch.run_site("tower0", configs["tower0"], tmp_path / "out" / "tower0")
    assert (outcome.status, outcome.kind, outcome.error) == ("failed", "output", "OutputError")
    assert outcome.traceback == ""

    def explode(path):
        raise ZeroDivisionError("a fault inside")

    monkeypatch.setattr("fluxpart.pipeline.process_site_config", explode)
    outcome = batch.run_site("tower0", configs["tower0"], tmp_path / "out" / "tower0")
    assert (outcome.status, outcome.kind, outcome.error) == ("failed", "internal",
                                                             "ZeroDivisionError")
    assert "explode" in outcome.traceback


def test_is_up_to_date_checks_hashes_settings_and_versions(towers, tmp_path, monkeypatch):
    """A result folder is current only with the same config, input, versions and table bytes."""
    root, configs = towers
    config, folder = configs["tower2"], tmp_path / "tower2"
    assert not batch.is_up_to_date(config, folder)                      # nothing written yet
    assert main(["run", str(config), "--out", str(folder)]) == 0
    assert batch.is_up_to_date(config, folder)

    versions = batch.library_versions()
    monkeypatch.setattr(batch, "library_versions", lambda: {**versions, "numpy": "0.0"})
    assert batch._stale_reason(config, folder) == "library versions changed"
    monkeypatch.undo()

    daily = folder / "daily.parquet"
    original = daily.read_bytes()
    daily.write_bytes(original + b"\0")
    assert batch._stale_reason(config, folder) == "table 'daily.parquet' changed"
    daily.unlink()
    assert batch._stale_reason(config, folder) == "table 'daily.parquet' missing"
    daily.write_bytes(original)
    assert batch.is_up_to_date(config, folder)

    # a folder of the release before night_donor_margin (leftovers54): the line names
    # the added setting, its value then and now, not just "settings changed"
    manifest_path = folder / "manifest.json"
    written = manifest_path.read_text(encoding="utf-8")
    manifest = json.loads(written)
    del manifest["config"]["night_donor_margin"]
    manifest_path.write_text(json.dumps(manifest), encoding="utf-8")
    assert batch._stale_reason(config, folder) == (
        "a setting added since the folder's release: night_donor_margin (added in 0.34.0: "
        'the folder computed as "none", now "threshold_spread")')
    manifest["config"]["year_start"] = "07-01"    # and a setting the folder names differs
    manifest_path.write_text(json.dumps(manifest), encoding="utf-8")
    assert batch._stale_reason(config, folder).startswith(
        "settings changed, and a setting added since the folder's release: night_donor_margin")
    manifest_path.write_text(written, encoding="utf-8")
    assert batch.is_up_to_date(config, folder)


def test_progress_line_counts_done_failed_and_remaining():
    """The terminal line shows sites ended of total, failed and remaining."""
    stream = io.StringIO()
    progress = batch._SiteProgress(3, stream)
    outcomes = (("a", "written"), ("b", "failed"), ("c", "skipped"))
    for finished, (key, status) in enumerate(outcomes, start=1):
        progress(batch.SiteOutcome(key=key, config="", directory="", status=status),
                 finished, 3)
    progress.close()
    lines = stream.getvalue().split("\r")
    assert "0 failed, 3 remaining" in lines[1] and "0/3" in lines[1]
    assert "1 failed, 0 remaining" in lines[-1] and "3/3" in lines[-1]
    assert stream.getvalue().endswith("\n")


# --------------------------------------------------------------------------- whole batches

def test_batch_is_byte_identical_to_fluxpart_run(towers, tmp_path, capsys):
    """Each site's folder from the default local cluster equals ``fluxpart run`` on it."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(c) for c in configs.values()])
    assert main(["batch", str(sites), "--quiet"]) == 0
    printed = capsys.readouterr().out
    assert "3 processed, 0 up to date (skipped), 0 failed" in printed
    assert "processed again" not in printed          # new folders need no reason
    assert "network_daily/, failures.parquet)" in printed      # a list, commas between
    out = tmp_path / "network-output"
    for key, config in configs.items():
        single = tmp_path / "single" / key
        assert main(["run", str(config), "--out", str(single)]) == 0
        from_batch = _snapshot(out / key)
        from_run = _snapshot(single)
        assert sorted(from_batch) == sorted(from_run)
        assert any(name.endswith(".parquet") for name in from_run)
        for name in from_run:
            if name == "run-log.json":        # who/when/where: the one file meant to differ
                continue
            assert from_batch[name][0] == from_run[name][0], f"{key}/{name} differs"
        manifest = batch.read_manifest(out / key)
        for entry in manifest["tables"].values():
            # hashlib is the reference for the recorded SHA-256 of each table
            data = (out / key / entry["file"]).read_bytes()
            assert entry["sha256"] == hashlib.sha256(data).hexdigest()


def test_external_scheduler_and_workers(towers, tmp_path):
    """A batch runs on a `dask scheduler` + `dask worker` pair on 127.0.0.1 via --scheduler."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"]), str(configs["tower1"])])
    scheduler_file = tmp_path / "scheduler.json"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(REPOSITORY), *filter(None, [os.environ.get("PYTHONPATH")])])}
    common = {"env": env, "cwd": tmp_path, "stdout": subprocess.DEVNULL,
              "stderr": subprocess.DEVNULL}
    processes = [subprocess.Popen(
        [sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1",
         "--port", "0", "--no-dashboard", "--dashboard-address", "127.0.0.1:0",
         "--scheduler-file", str(scheduler_file)], **common)]
    try:
        deadline = time.monotonic() + 60
        while not scheduler_file.exists() and time.monotonic() < deadline:
            time.sleep(0.2)
        processes.append(subprocess.Popen(
            [sys.executable, "-m", "distributed.cli.dask_worker", "--nworkers", "2",
             "--nthreads", "1", "--host", "127.0.0.1", "--no-dashboard",
             "--dashboard-address", "127.0.0.1:0", "--scheduler-file", str(scheduler_file)],
            **common))
        with distributed.Client(scheduler_file=str(scheduler_file), timeout=30) as client:
            client.wait_for_workers(2, timeout=60)
            address = client.scheduler.address
            hosts = {info["host"] for info in client.scheduler_info()["workers"].values()}
            assert address.startswith("tcp://127.0.0.1:") and hosts == {"127.0.0.1"}
            report = batch.run_batch(sites, scheduler=address)
            assert len(client.scheduler_info()["workers"]) == 2     # still the same cluster
        assert (report.written, report.failed, report.exit_code) == (2, 0, 0)
        for key in ("tower0", "tower1"):
            assert batch.is_up_to_date(configs[key], report.out / key)
    finally:
        for process in reversed(processes):           # the workers first, then the scheduler
            process.terminate()
            try:
                process.wait(timeout=30)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait(timeout=10)


def test_bad_site_fails_alone_and_reruns_skip(towers, tmp_path, cluster, capsys):
    """One bad site: the others complete, exit 1, failures.parquet names it; reruns skip."""
    root, configs = towers
    bad = _write_bad_tower(tmp_path, configs["tower0"])
    sites = _network_file(tmp_path, [*(str(c) for c in configs.values()), str(bad)])
    out = tmp_path / "network-output"
    args = ["batch", str(sites), "--scheduler", cluster.scheduler_address, "--quiet"]
    assert main(args) == 1
    captured = capsys.readouterr()
    assert "3 processed, 0 up to date (skipped), 1 failed" in captured.out
    assert "site 'broken'" in captured.err and "MissingColumnError" in captured.err

    failures = pd.read_parquet(out / "failures.parquet")
    assert failures["site"].tolist() == ["broken"]
    assert failures["config"].tolist() == [str(bad.resolve())]
    assert failures["error"].tolist() == ["MissingColumnError"]
    assert failures["kind"].tolist() == ["input"]
    assert "co2_flux_nowhere" in failures["message"].iloc[0]
    for key in configs:
        assert (out / key / "manifest.json").is_file()
    assert not (out / "broken").exists()

    first = _snapshot(out)
    calls = []
    report = batch.run_batch(sites, scheduler=cluster.scheduler_address,
                             progress=lambda outcome, finished, total: calls.append(
                                 (outcome.key, outcome.status, finished, total)))
    assert (report.written, report.skipped, report.failed) == (0, 3, 1)
    assert sorted(c[2] for c in calls) == [1, 2, 3, 4] and {c[3] for c in calls} == {4}
    assert {c[0]: c[1] for c in calls} == {"tower0": "skipped", "tower1": "skipped",
                                           "tower2": "skipped", "broken": "failed"}
    second = _snapshot(out)
    for name, (data, mtime) in first.items():        # site folders untouched, tables equal
        assert second[name][0] == data
        if name.startswith("tower"):
            assert second[name][1] == mtime

    edited = configs["tower1"].read_text(encoding="utf-8") + "# a comment changes the hash\n"
    original = configs["tower1"].read_text(encoding="utf-8")
    try:
        configs["tower1"].write_text(edited, encoding="utf-8")
        report = batch.run_batch(sites, scheduler=cluster.scheduler_address)
    finally:
        configs["tower1"].write_text(original, encoding="utf-8")
    by_key = {o.key: o for o in report.outcomes}
    assert (by_key["tower1"].status, by_key["tower1"].note) == ("written",
                                                               "site config changed")
    # the summary says why (review49: a rerun printed "1 processed" and no reason)
    assert ("processed again, the folder not up to date: tower1 (site config changed)"
            in batch._summary(report).splitlines())
    assert by_key["tower0"].status == by_key["tower2"].status == "skipped"

    report = batch.run_batch(sites, scheduler=cluster.scheduler_address, force=True)
    assert (report.written, report.skipped, report.failed) == (3, 0, 1)
    assert "tower0 (forced); tower1 (forced); tower2 (forced)" in batch._summary(report)
    forced = _snapshot(out)
    assert sorted(forced) == sorted(first)
    for name, (data, _) in first.items():                 # same input: the same bytes
        if name.endswith("run-log.json"):                 # who/when: meant to differ
            continue
        assert forced[name][0] == data, f"{name} changed on a forced rerun"


def test_network_dataset_reads_back_with_a_site_column(towers, tmp_path, cluster):
    """pyarrow.dataset and pandas read the partitioned network table; rows match each site."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(c) for c in configs.values()])
    report = batch.run_batch(sites, scheduler=cluster.scheduler_address)
    folder = report.out / batch.NETWORK_DATASET
    assert sorted(p.name for p in folder.iterdir()) == [f"site={k}" for k in sorted(configs)]

    # pyarrow.dataset with Hive partitioning is the reference reader of the layout
    dataset = ds.dataset(folder, format="parquet", partitioning="hive")
    table = dataset.to_table().to_pandas()
    assert sorted(table["site"].astype(str).unique()) == sorted(configs)
    assert pq.read_schema(folder / "site=tower0" / "part-0.parquet").field(
        "nee").metadata[b"unit"] == b"g m-2"          # UDUNITS-2; carbon in the description
    # DuckDB's parquet_kv_metadata (the reference: a reader that sees only the file's
    # key-value metadata) finds the units, descriptions and time convention of every
    # network dataset, as of a site's own tables (review 6: there were none)
    import duckdb

    for dataset_folder in batch.NETWORK_DATASETS.values():
        part = (report.out / dataset_folder / "site=tower0" / "part-0.parquet").as_posix()
        [(value,)] = duckdb.sql(f"SELECT value FROM parquet_kv_metadata('{part}') "
                                "WHERE key = 'fluxpart'").fetchall()
        meta = json.loads(value)
        assert meta["columns"]["nee"]["unit"] == "g m-2"
        assert meta["columns"]["latitude"]["unit"] == "degree_north"
        assert "grams of carbon" in meta["columns"]["nee"]["description"]
        assert meta["time_convention"].startswith("each stamp marks the start")
        # the partition column a Hive reader adds is described too (modeller52: no entry)
        assert meta["columns"]["site"] == {"unit": "", "description": batch.
                                           NETWORK_SITE_DESCRIPTION}

    frame = pd.read_parquet(folder)
    assert "site" in frame.columns and len(frame) == len(table) == len(report.network)
    # plain pandas restores DataFrame.attrs from the files' PANDAS_ATTRS key
    # (pandas/io/parquet.py), and read_network gives the same units and descriptions
    # (round modeller23: neither carried a unit before)
    for attrs in (frame.attrs, report.network.attrs, batch.read_network(report.out).attrs):
        assert attrs["units"]["nee"] == "g m-2" and attrs["units"]["latitude"] == "degree_north"
        assert "grams of carbon" in attrs["descriptions"]["nee"]
        assert attrs["time_convention"].startswith("each stamp marks the start")
        assert attrs["descriptions"]["site"].startswith("site key (the result folder's name)")
    assert set(report.network.attrs["units"]) == set(report.network.columns)
    monthly = batch.read_network(report.out, "monthly")
    assert set(monthly.attrs["units"]) == set(monthly.columns)
    assert monthly.attrs["units"]["gpp_daytime_sigma"] == "g m-2"
    for key in configs:
        expected = read_table(report.out / key / "annual.parquet").reset_index()
        got = (report.network[report.network["site"] == key]
               .drop(columns=["site", "site_name", "latitude", "longitude"])
               .reset_index(drop=True))
        pd.testing.assert_frame_equal(got[expected.columns], expected, check_dtype=False)
        rows = frame[frame["site"].astype(str) == key]
        assert rows["site_name"].iloc[0].endswith("(fictional)")
        assert np.isfinite(rows["utc_offset"].to_numpy(dtype=float)).all()     # issue 15
    # the summary prints u* thresholds with their three decimals (issue 15)
    summary = batch._summary(report)
    for value in report.network["ustar_threshold"].dropna():
        assert f"{value:.3f}" in summary
    # ... and the header gives their unit as the network table stores it (review25: the
    # header named g C m-2 alone, above a column of u* thresholds)
    unit = pq.read_schema(folder / "site=tower0" / "part-0.parquet").field(
        "ustar_threshold").metadata[b"unit"].decode()
    assert unit == "m s-1" and f"ustar_threshold in {unit}" in summary
    assert report.failures.empty and pq.read_table(report.out / "failures.parquet").num_rows == 0

    # issue 15: the monthly and daily budgets are network datasets too, read back by
    # pyarrow.dataset (the reference reader of Hive partitioning) and by read_network
    for table, period in (("monthly", "month"), ("daily", "date")):
        folder = report.out / batch.NETWORK_DATASETS[table]
        dataset = ds.dataset(folder, format="parquet", partitioning="hive").to_table().to_pandas()
        network = batch.read_network(report.out, table)
        assert len(dataset) == len(network)
        assert pq.read_schema(folder / "site=tower0" / "part-0.parquet").field(
            "nee").metadata[b"unit"] == b"g m-2"
        for key in configs:
            expected = read_table(report.out / key / f"{table}.parquet").reset_index()
            got = network[network["site"] == key].reset_index(drop=True)
            assert got[period].is_monotonic_increasing
            pd.testing.assert_frame_equal(got[expected.columns], expected, check_dtype=False)
    with pytest.raises(ConfigError, match="network table 'weekly'"):
        batch.read_network(report.out, "weekly")

    # README "For modellers", "Several sites in one frame": its block, run on this batch's
    # output, gives every site's budget rows and records with the site key beside them,
    # as each site's own tables hold them (round modeller52: the section had no word on
    # sites; a modeller found the `site` column only by reading the batch section)
    namespace = {}
    exec(compile(_readme_block("**Several sites in one frame.**").replace(
        '"network-output"', repr(str(report.out))), "README.md", "exec"), namespace)
    assert namespace["daily"].columns[:2].tolist() == ["site", "date"]
    records = namespace["records"]
    for key in configs:
        own = read_table(report.out / key / "timeseries.parquet").reset_index()
        mine = records[records["site"] == key].drop(columns="site").reset_index(drop=True)
        pd.testing.assert_frame_equal(mine, own, check_dtype=False, check_categorical=False)
    assert len(records) == sum(len(read_table(report.out / key / "timeseries.parquet"))
                               for key in configs)


_LOCAL_WORKER_SETTINGS = """
import json, os, sys
from fluxpart.batch import _client
if __name__ == "__main__":
    before = dict(os.environ)
    client, local = _client(None, 1)
    try:
        settings = client.run(lambda: (
            __import__("dask").config.get("distributed.worker.profile.enabled"),
            __import__("os").environ.get("MALLOC_TRIM_THRESHOLD_"),
            "fluxpart.pipeline" in __import__("sys").modules))
    finally:
        client.close()
        local.close()
    print(json.dumps({"workers": list(settings.values()),
                      "malloc": before.get("MALLOC_TRIM_THRESHOLD_"),
                      "environment_kept": dict(os.environ) == before}))
"""


def test_local_workers_run_without_the_statistical_profiler(tmp_path):
    """fluxpart's own local cluster switches off Dask's 10-ms stack sampler (it cost 15 % of
    a site's CPU in a worker) and adds no malloc setting of its own to the workers' (they
    inherit the client process's); the environment of the client is left as it was. Where
    the workers fork from a server (Linux), they hold fluxpart's pipeline before their first
    task; spawned workers start without it. In a fresh interpreter: a fork server keeps the
    environment of its start, and Dask's own clusters (the fixture) write theirs into the
    process."""
    from fluxpart.batch import _start_method

    script = tmp_path / "workers.py"
    script.write_text(_LOCAL_WORKER_SETTINGS, encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(REPOSITORY), *filter(None, [os.environ.get("PYTHONPATH")])])}
    env.pop("MALLOC_TRIM_THRESHOLD_", None)
    done = subprocess.run([sys.executable, str(script)], env=env, cwd=tmp_path,
                          capture_output=True, text=True, timeout=120, check=True)
    found = json.loads(done.stdout.strip().splitlines()[-1])
    assert found == {"workers": [[False, None, _start_method() == "forkserver"]],
                     "malloc": None, "environment_kept": True}


def test_local_workers_fork_from_a_server_on_linux_only():
    """Python documentation, ``multiprocessing``, "Contexts and start methods" (3.11):
    Windows offers spawn only; on macOS spawn is the default since Python 3.8 because
    forking can crash there (system libraries are not fork-safe); forkserver exists on Unix
    platforms that pass file descriptors over pipes. fluxpart forks from a server on Linux
    only and keeps Dask's spawn elsewhere."""
    from fluxpart.batch import _start_method

    assert _start_method("linux", ("fork", "spawn", "forkserver")) == "forkserver"
    assert _start_method("linux", ("fork", "spawn")) == "spawn"
    assert _start_method("darwin", ("spawn", "fork", "forkserver")) == "spawn"
    assert _start_method("win32", ("spawn",)) == "spawn"
    assert _start_method() in __import__("multiprocessing").get_all_start_methods()


def test_sites_computed_from_the_same_input_are_warned_about(tmp_path):
    """A site config copied for a new tower with [input] path left unchanged: two results
    of one tower's records, counted twice in the network tables without a word. Sites are
    matched by the SHA-256 their manifests record (one file, or the list of several)."""
    def folder(key, hashes):
        directory = tmp_path / key
        directory.mkdir()
        recorded = ({"path": "a.csv", "sha256": hashes[0]} if len(hashes) == 1 else
                    {"files": [{"path": f"{h}.csv", "sha256": h} for h in hashes]})
        (directory / "manifest.json").write_text(json.dumps({"provenance": {"input": recorded}}))
        return batch.SiteOutcome(key=key, config=f"{key}.toml", directory=str(directory),
                                 status="written")

    outcomes = [folder("fen", ["aa"]), folder("fen_copy", ["aa"]), folder("bog", ["bb"]),
                folder("two_years", ["aa", "bb"]),
                batch.SiteOutcome(key="broken", config="broken.toml",
                                  directory=str(tmp_path / "none"), status="failed")]
    warnings = batch.same_input_sites(outcomes)
    assert len(warnings) == 1
    assert warnings[0].startswith("sites 'fen', 'fen_copy' were computed from the same input")
    assert "2 times" in warnings[0] and "[input] path" in warnings[0]
    assert batch.same_input_sites(outcomes[2:]) == []


def test_sites_of_different_inputs_under_one_name_are_warned_about(tmp_path):
    """A site config copied for a new tower with [input] path changed but [site] name
    left: two towers under one name in the network tables (mistakes17: silent before;
    a site's name identifies it in published tables, common practice)."""
    def folder(key, name, sha):
        directory = tmp_path / key
        directory.mkdir()
        (directory / "manifest.json").write_text(json.dumps({
            "site": {"name": name}, "provenance": {"input": {"path": "a.csv", "sha256": sha}}}))
        return batch.SiteOutcome(key=key, config=f"{key}.toml", directory=str(directory),
                                 status="written")

    outcomes = [folder("east", "Quillmoor east meadow", "aa"),
                folder("north", "Quillmoor  East meadow ", "bb"),
                folder("south", "Quillmoor south maize", "cc"),
                folder("east_copy", "Quillmoor south maize", "cc")]
    warnings = batch.same_name_sites(outcomes)
    assert len(warnings) == 1
    assert warnings[0].startswith("sites 'east', 'north' carry the same [site] name")
    assert "different input files" in warnings[0]
    # one input under one name twice is the same-input warning's, not this one's
    assert batch.same_name_sites(outcomes[2:]) == []
    assert len(batch.same_input_sites(outcomes[2:])) == 1


def test_towers_linked_to_one_shared_config_are_told_to_take_a_config_each(tmp_path):
    """Known truth (invented folders): two towers' folders each link one shared site
    config (POSIX symbolic links, each tower reading its own input, kept since round
    review30), so both carry its one [site] name. The same-name warning told them to
    "give each its own [site] name", which the shared config cannot; now it names the
    shared file and says that each tower needs a config of its own (round review31).
    Configs of their own under one name keep the plain advice."""
    shared = tmp_path / "shared" / "site.toml"
    shared.parent.mkdir()
    shared.write_text("[site]\n")

    def folder(key, sha, config):
        directory = tmp_path / "out" / key
        directory.mkdir(parents=True)
        (directory / "manifest.json").write_text(json.dumps({
            "site": {"name": "Quillmoor meadows"},
            "provenance": {"input": {"path": "tower.csv", "sha256": sha}}}))
        return batch.SiteOutcome(key=key, config=str(config), directory=str(directory),
                                 status="written")

    links = []
    for name in ("a", "b"):
        (tmp_path / name).mkdir()
        (tmp_path / name / "site.toml").symlink_to(Path("..") / "shared" / "site.toml")
        links.append(tmp_path / name / "site.toml")
    (warning,) = batch.same_name_sites([folder("a-site", "aa", links[0]),
                                        folder("b-site", "bb", links[1])])
    assert "give each its own [site] name" in warning
    assert f"one site config through links ({shared.resolve()})" in warning
    own = [tmp_path / "c.toml", tmp_path / "d.toml"]
    for config in own:
        config.write_text("[site]\n")
    (warning,) = batch.same_name_sites([folder("c", "cc", own[0]), folder("d", "dd", own[1])])
    assert "through links" not in warning


def test_one_tower_split_into_configs_per_year_is_not_warned_about(tmp_path):
    """One tower's record in one config per year (a new logger program, other columns):
    different inputs under one [site] name but no year in common, so the network
    tables' rows of that name are told apart by year (a table keyed by site and year,
    common practice). Warned before as 'one name for different towers', with the advice
    to rename one year's config, which would split one tower into two sites."""
    def folder(key, name, sha, years):
        directory = tmp_path / key
        directory.mkdir()
        (directory / "manifest.json").write_text(json.dumps({
            "site": {"name": name}, "provenance": {"input": {"path": "a.csv", "sha256": sha}}}))
        annual = pd.DataFrame({"nee": [-100.0] * len(years)},
                              index=pd.Index(years, name="year"))
        return batch.SiteOutcome(key=key, config=f"{key}.toml", directory=str(directory),
                                 status="written", annual=annual)

    split = [folder("moor_2020", "Quillmoor east meadow", "aa", [2020]),
             folder("moor_2021", "Quillmoor east meadow", "bb", [2021, 2022])]
    assert batch.same_name_sites(split) == []
    # a second tower under that name in a year the first holds is still named
    clash = split + [folder("north", "Quillmoor east meadow", "cc", [2022])]
    warnings = batch.same_name_sites(clash)
    assert len(warnings) == 1 and "'north'" in warnings[0]


# --------------------------------------------------------------------------- output folder


def _no_cluster(*args, **kwargs):
    raise AssertionError("the cluster was started")


def test_unwritable_output_folder_is_refused_before_any_work(towers, tmp_path, monkeypatch,
                                                            capsys):
    """An output folder files cannot be written in (simulated: root may write anywhere): one
    error line, exit 2, before the cluster starts (review: every site was attempted, then a
    PermissionError traceback from failures.parquet)."""
    import tempfile

    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    real = tempfile.TemporaryFile

    def denied(*args, dir=None, **kwargs):
        if dir is not None and Path(dir).name == "network-output":
            raise PermissionError(13, "Permission denied", str(dir))
        return real(*args, dir=dir, **kwargs)

    monkeypatch.setattr(batch, "_client", _no_cluster)
    monkeypatch.setattr(tempfile, "TemporaryFile", denied)
    assert main(["batch", str(sites), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and "network-output" in err[0]
    assert "cannot be written (Permission denied)" in err[0]


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="needs POSIX permissions that apply (not root)")
def test_read_only_output_folder_is_refused_before_any_work(towers, tmp_path, monkeypatch,
                                                           capsys):
    """The same with a real read-only folder."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    out = tmp_path / "network-output"
    out.mkdir()
    out.chmod(0o500)
    monkeypatch.setattr(batch, "_client", _no_cluster)
    try:
        assert main(["batch", str(sites), "--quiet"]) == 2
        assert "cannot be written" in capsys.readouterr().err
    finally:
        out.chmod(0o700)


def test_staging_left_by_a_killed_batch_is_swept_at_the_next_start(towers, tmp_path,
                                                                   monkeypatch):
    """`.network_*` staging folders and temporary failures files go at its start; other
    hidden entries stay (review: kept after two clean reruns). Round faults27: a staging
    folder dated after the batch's start (a file server's clock ahead) with no batch
    holding the network tables' lock is a leftover too (kept for good before); one of a
    batch writing now is kept by that batch's lock
    (test_robustness_faults27.py)."""
    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    out = tmp_path / "network-output"
    stale = [out / ".network_daily.9w_2rx51", out / ".network_annual.old.abcd_123",
             out / ".failures.parquet.k2j3h4g5.tmp"]
    kept = [out / ".network_notes", out / "site_a", out / ".network_daily.keep"]
    for path in stale[:2] + kept[:2]:
        (path / "site=x").mkdir(parents=True)
        (path / "site=x" / "part-0.parquet").write_bytes(b"PAR1")
    stale[2].write_bytes(b"PAR1")
    kept[2].write_text("notes")
    hour_ago = time.time() - 3600
    for path in stale + kept:
        os.utime(path, (hour_ago, hour_ago))
    ahead = out / ".network_monthly.n0wwr1t3"      # dated ahead, no batch writing
    ahead.mkdir()
    os.utime(ahead, (time.time() + 60, time.time() + 60))
    monkeypatch.setattr(batch, "_client", lambda *a: (_ for _ in ()).throw(ConfigError("stop")))
    with pytest.raises(ConfigError, match="stop"):
        batch.run_batch(sites)
    assert [p.exists() for p in stale] == [False] * 3
    assert all(p.exists() for p in kept) and not ahead.exists()


@pytest.mark.parametrize("signal_name", ["SIGTERM", "Ctrl-C"])
def test_stopped_batch_does_not_promise_consistent_network_tables(towers, tmp_path,
                                                                  monkeypatch, capsys,
                                                                  signal_name):
    """A stopped batch says the site folders are whole and the network tables are rewritten
    whole by the next run, not "never a mix" (review: the tables were old and mixed)."""
    from fluxpart import cli

    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"])])
    stop = cli._Terminated if signal_name == "SIGTERM" else KeyboardInterrupt
    monkeypatch.setattr(batch, "run_batch", lambda *a, **k: (_ for _ in ()).throw(stop()))
    assert main(["batch", str(sites), "--quiet"]) in (130, 143)
    err = capsys.readouterr().err
    assert "never a mix" not in err and "network tables" in err and "run the batch again" in err


def test_network_tables_are_read_only_when_they_match_their_seal(towers, tmp_path, cluster):
    """network.json, written last, names every network file and the site folders' manifest
    seals: tables left incomplete or old by a stopped batch, or older than a site folder, are
    refused by read_network with "run the batch again"; the rerun reads again (review: kill
    mid-write left a silent mix of seeds)."""
    import shutil

    root, configs = towers
    sites = _network_file(tmp_path, [str(configs["tower0"]), str(configs["tower1"])])
    report = batch.run_batch(sites, scheduler=cluster.scheduler_address)
    out = report.out
    seal = json.loads((out / batch.NETWORK_SEAL).read_text(encoding="utf-8"))
    assert seal["complete"] is True and sorted(seal["sites"]) == ["tower0", "tower1"]
    intact = (out / batch.NETWORK_SEAL).read_bytes()
    daily = batch.read_network(out, "daily")

    # stopped while writing: the seal still says incomplete
    (out / batch.NETWORK_SEAL).write_text('{"complete": false}')
    with pytest.raises(InputFileError, match="incomplete.*run the batch again"):
        batch.read_network(out, "annual")
    (out / batch.NETWORK_SEAL).write_bytes(intact)

    # stopped between two tables: one site's file is not the recorded one
    part = out / "network_daily" / "site=tower0" / "part-0.parquet"
    saved = part.read_bytes()
    shutil.copyfile(out / "network_daily" / "site=tower1" / "part-0.parquet", part)
    with pytest.raises(InputFileError, match="network_daily/site=tower0 .* not the file"):
        batch.read_network(out, "daily")
    part.write_bytes(saved)
    pd.testing.assert_frame_equal(batch.read_network(out, "daily"), daily)

    # stopped after some site folders were rewritten: the site's manifest seal moved
    manifest = out / "tower1" / "manifest.json"
    saved = manifest.read_bytes()
    edited = json.loads(saved)
    edited["seal"] = "0" * 64
    manifest.write_text(json.dumps(edited), encoding="utf-8")
    with pytest.raises(InputFileError, match="tower1' changed after the network tables"):
        batch.read_network(out, "monthly")
    # a value edited in a site's manifest, its recorded seal left as it was: the seal no
    # longer matches the content (SHA-256 of the canonical JSON), which passed (review
    # round thirteen: only the "seal" entry was compared)
    edited = json.loads(saved)
    edited["site"]["latitude"] = -edited["site"]["latitude"]
    manifest.write_text(json.dumps(edited), encoding="utf-8")
    with pytest.raises(InputFileError, match="tower1' changed after the network tables"):
        batch.read_network(out, "monthly")
    manifest.write_bytes(saved)
    # network.json cut short (a copy stopped mid-file): named as damaged, not as a seal
    # that "says so" of a stopped batch
    (out / batch.NETWORK_SEAL).write_bytes(intact[:100])
    with pytest.raises(InputFileError, match="network.json' is damaged .*run the batch again"):
        batch.read_network(out, "annual")
    (out / batch.NETWORK_SEAL).write_bytes(intact)
    batch.run_batch(sites, scheduler=cluster.scheduler_address)
    assert (out / batch.NETWORK_SEAL).read_bytes() == intact          # rerun: the same seal
    pd.testing.assert_frame_equal(batch.read_network(out, "daily"), daily)


def test_two_batches_write_their_network_tables_one_at_a_time(towers, tmp_path, monkeypatch):
    """Two batches into one output folder (review 6: two threads writing the network tables
    of the same sites, 20 rounds, failed once with FileNotFoundError between the two renames
    of a folder swap and left a ``.network_daily.old.*`` folder). The writes take turns under
    a lock file: never two swaps at once, no error, no leftover, the seal read back (POSIX
    ``flock`` semantics: one holder per file; common practice of the filelock library)."""
    import threading

    root, configs = towers
    out = tmp_path / "out"
    outcomes = [batch.run_site(key, config, out / key) for key, config in configs.items()]
    assert {o.status for o in outcomes} == {"written"}
    inside, most, errors = [0], [0], []
    original = batch._replace_folder

    def slow_replace(staging, target):
        inside[0] += 1
        most[0] = max(most[0], inside[0])
        time.sleep(0.1)
        inside[0] -= 1
        original(staging, target)

    monkeypatch.setattr(batch, "_replace_folder", slow_replace)
    start = threading.Barrier(2)

    def write():
        try:
            start.wait()
            batch._write_network(outcomes, out)
        except Exception as error:  # noqa: BLE001  collected for the assertion
            errors.append(error)

    threads = [threading.Thread(target=write) for _ in range(2)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert errors == [] and most[0] == 1
    assert sorted(p.name for p in out.iterdir() if p.name.startswith(".")) == []
    assert sorted(batch.read_network(out)["site"].unique()) == sorted(configs)


def _ignores_ctrl_c() -> bool:
    import signal

    return signal.getsignal(signal.SIGINT) == signal.SIG_IGN


def test_local_cluster_is_quiet_on_port_8787_and_ctrl_c():
    """Dask's scheduler serves HTTP (health, metrics) even without a dashboard, on port 8787
    unless told otherwise, and warns "Port 8787 is already in use" on stderr where another
    cluster or batch holds it (distributed 2026.8, ``ServerNode.start_http_server``; review
    6: two batches at once printed it). fluxpart's local cluster takes a free port on
    127.0.0.1 and says nothing. Its workers ignore SIGINT, which a terminal's Ctrl-C sends
    to the whole foreground process group (POSIX General Terminal Interface; review 6:
    each worker printed a KeyboardInterrupt traceback, 67 lines on stderr, before the
    batch's one line); the client process still takes Ctrl-C."""
    import socket
    import warnings

    holder = socket.socket()
    try:
        holder.bind(("127.0.0.1", 8787))
        holder.listen()
    except OSError:
        pass                     # already taken by another process: the same condition
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            client, cluster = batch._client(None, 1)
            try:
                server = cluster.scheduler.http_server
                assert server.address == "127.0.0.1" and server.port != 8787
                assert list(client.run(_ignores_ctrl_c).values()) == [True]
                assert not _ignores_ctrl_c()
            finally:
                client.close()
                cluster.close()
    finally:
        holder.close()
    assert not [w for w in caught if "already in use" in str(w.message)]


def test_a_batch_output_folder_given_as_a_result_folder_says_what_to_give(tmp_path, capsys):
    """Review 6: `fluxpart.load` or `report` on the batch output folder said only "is not a
    fluxpart result folder"; the error names a site's folder in it and read_network (the
    README's layout: out/<key>/ per site, network.json beside them)."""
    import fluxpart

    (tmp_path / batch.NETWORK_SEAL).write_text('{"complete": true}', encoding="utf-8")
    with pytest.raises(InputFileError, match=r"not a fluxpart result folder; it is a batch "
                       r"output folder: give one site's folder in it .*read_network"):
        fluxpart.load(tmp_path)
    assert main(["report", str(tmp_path), "--quiet"]) == 2
    assert "it is a batch output folder" in capsys.readouterr().err
    (tmp_path / batch.NETWORK_SEAL).unlink()
    with pytest.raises(InputFileError, match=r"not a fluxpart result folder$"):
        fluxpart.load(tmp_path)


def test_a_sites_warnings_are_listed_by_the_summary_not_printed_by_python(tmp_path):
    """Behaviour check (review round eighteen): a site's warnings (here a 30-day record,
    a partial year) reached the batch user only as Python's warning line with a source
    file and line of fluxpart ("pipeline.py:1154: FluxpartWarning: ... return
    process(...)"), and the summary named none. The task now keeps them out of Python's
    warnings module and the summary lists each, naming the site, as the manifest records
    them."""
    import warnings

    from bundles import make_bundle

    from fluxpart.errors import FluxpartWarning

    config = make_bundle(tmp_path / "short")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        outcome = batch.run_site("short", config, tmp_path / "out" / "short")
    assert outcome.status == "written"
    assert not [w for w in caught if issubclass(w.category, FluxpartWarning)]
    manifest = json.loads((tmp_path / "out" / "short" / "manifest.json").read_text())
    assert outcome.warnings and outcome.warnings == tuple(manifest["warnings"])
    assert any("partial year" in text for text in outcome.warnings)
    report = batch.BatchReport(out=tmp_path / "out", outcomes=(outcome,),
                               network=pd.DataFrame(), failures=pd.DataFrame())
    summary = batch._summary(report)
    for text in outcome.warnings:
        assert f"warning: site 'short': {text}" in summary
    again = batch.run_site("short", config, tmp_path / "out" / "short")
    assert again.status == "skipped" and again.warnings == outcome.warnings


def test_sites_computed_with_different_settings_are_warned_about(tmp_path):
    """Round mistakes21: one tower's config left with a fixed u* threshold tried there (or
    copied from an older template) computed that site otherwise, silently, while the
    network tables put its sums beside the others'. A network's budgets are compared with
    each other, so they are computed alike (common practice); a site's own event dates and
    budget year are its own and not named, nor a seed (polish49): it draws the bootstrap
    and Monte Carlo samples, not the method, and what an auditor checks is a rerun with
    the original's own seed (which `verify` takes from the manifest)."""
    def folder(key, **settings):
        directory = tmp_path / key
        directory.mkdir()
        config = {"seed": 0, "ustar_method": "moving_point", "events": [],
                  "year_start": "01-01", **settings}
        (directory / "manifest.json").write_text(json.dumps({"config": config}))
        return batch.SiteOutcome(key=key, config=f"{key}.toml", directory=str(directory),
                                 status="written")

    alike = [folder("east"), folder("north", events=["2021-07-20"]),
             folder("south", year_start="07-01", seed=7),
             batch.SiteOutcome(key="broken", config="broken.toml",
                               directory=str(tmp_path / "none"), status="failed")]
    assert batch.different_settings_sites(alike) == []
    warnings = batch.different_settings_sites(alike + [folder("west", ustar_method="fixed")])
    assert len(warnings) == 1
    assert "ustar_method" in warnings[0] and "\"fixed\" at 'west'" in warnings[0]
    assert "'east', 'north', 'south'" in warnings[0]
    assert "events" not in warnings[0] and "year_start" not in warnings[0]
    assert "seed" not in warnings[0]


def test_linked_site_configs_read_the_input_beside_their_own_link(tmp_path):
    """A shared site config linked into each site's folder (`a/site.toml ->
    ../shared/site.toml`, `path = "tower.csv"`): `fluxpart run a/site.toml` reads
    `a/tower.csv` (the link's folder, POSIX path resolution of a relative name read from
    a file's content (m)), but `batch` resolved the link first, so both links were one
    site reading `shared/tower.csv`. Now each link is its own site reading its own input,
    as `run` reads it; the network file's relative paths likewise from its own link."""
    from fluxpart.io import read_site_config

    config = write_example(tmp_path / "shared")
    text = config.read_text(encoding="utf-8").replace(
        'path = "quillmoor_grassland.csv"', 'path = "tower.csv"')
    config.write_text(text, encoding="utf-8")
    for name in ("a", "b"):
        (tmp_path / name).mkdir()
        shutil.copy(config.with_suffix(".csv"), tmp_path / name / "tower.csv")
        try:
            (tmp_path / name / "site.toml").symlink_to(Path("..") / "shared" / config.name)
        except OSError:
            pytest.skip("no symbolic links on this file system")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (elsewhere / "network.toml").write_text('[batch]\nsites = ["*/site.toml"]\nout = "net"\n',
                                            encoding="utf-8")
    (tmp_path / "network.toml").symlink_to(elsewhere / "network.toml")
    network = batch.read_sites_file(tmp_path / "network.toml")
    assert network.out == tmp_path / "net"
    assert [key for key, _ in network.sites] == ["a-site", "b-site"]
    for (_, site_config), name in zip(network.sites, ("a", "b"), strict=True):
        assert site_config == tmp_path / name / "site.toml"
        batch_reads = read_site_config(site_config).input_paths
        run_reads = read_site_config(tmp_path / name / "site.toml").input_paths
        assert batch_reads == run_reads == (tmp_path / name / "tower.csv",)


def test_the_summary_prints_each_site_nee_with_its_stated_interval(tmp_path):
    """review33: ``fluxpart batch`` printed the sites' annual NEE side by side without any
    interval (``run`` prints each site's), inviting a comparison of sums whose 95 %
    intervals overlap. The summary now gives ``nee_ci95_low`` and ``nee_ci95_high`` beside
    ``nee``, as the network table stores them (sum -/+ 1.96 sigma, the 97.5th percentile
    of the standard normal, common practice; invented values)."""
    from scipy.stats import norm

    sigma = 10.0
    network = pd.DataFrame({"site": ["a", "b"], "year": [2021, 2021], "nee": [-293.4, -249.7]})
    network["nee_ci95_low"] = network["nee"] - norm.ppf(0.975) * sigma
    network["nee_ci95_high"] = network["nee"] + norm.ppf(0.975) * sigma
    report = batch.BatchReport(out=tmp_path, outcomes=(), network=network,
                               failures=pd.DataFrame())
    summary = batch._summary(report)
    header = next(line for line in summary.splitlines() if "nee_ci95_low" in line
                  and "site" in line)
    assert header.split() == ["site", "year", "nee", "nee_ci95_low", "nee_ci95_high"]
    row = next(line for line in summary.splitlines() if line.split()[:1] == ["a"])
    assert row.split()[2:] == ["-293.4", "-313.0", "-273.8"]
    assert "stated 95 % interval" in summary
