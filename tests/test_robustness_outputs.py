"""Robustness of the auditor's, the modeller's and the network operator's paths (round 3).

Contracts checked (README "Command line", "Output files", "Audit workflow"): a user
error is one ``error:`` line and exit 2 with nothing written; a result folder holds
only the files its manifest lists; result files are meant to be shared. External
facts: POSIX permission bits (``stat.S_IMODE``; 0o755 = owner rwx, group and others
r-x; a new file or folder gets 0o666 or 0o777 less the process's umask, POSIX
``open`` / ``mkdir``), CF-1.10 (Eaton et al. 2022) where named.
"""

import json
import os
import shutil
import stat
from contextlib import contextmanager

import pytest
from bundles import make_bundle

from fluxpart.cli import main
from fluxpart.demo import write_example
from fluxpart.manifest import manifest_seal, read_manifest
from fluxpart.pipeline import process_site_config
from fluxpart.resultdir import check_folder


def _network(tmp_path):
    """A network file listing the invented example site (nothing is processed here)."""
    write_example(tmp_path / "site")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["site/*.toml"]\n', encoding="utf-8")
    return sites


def _one_error_line(capsys):
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def test_batch_out_naming_a_file_is_one_error_line(tmp_path, capsys):
    """It raised FileExistsError with a traceback."""
    sites = _network(tmp_path)
    target = tmp_path / "notes.txt"
    target.write_text("keep me", encoding="utf-8")
    assert main(["batch", str(sites), "--out", str(target), "--quiet"]) == 2
    assert "is an existing file" in _one_error_line(capsys)
    assert target.read_text(encoding="utf-8") == "keep me"


@pytest.mark.parametrize("below", ["", "network"])
def test_batch_out_in_a_result_folder_is_refused_before_any_work(written_demo, tmp_path,
                                                                 capsys, below):
    """It wrote site folders and network tables into the result folder, which then failed
    its own manifest check (verify: NOT reproduced)."""
    sites = _network(tmp_path)
    result = tmp_path / "result"
    shutil.copytree(written_demo[1], result)
    out = result / below if below else result
    assert main(["batch", str(sites), "--out", str(out), "--quiet"]) == 2
    assert "result folder" in _one_error_line(capsys)
    assert check_folder(result, read_manifest(result)) == []


@contextmanager
def _umask(mask):
    previous = os.umask(mask)
    try:
        yield
    finally:
        os.umask(previous)


def test_network_dataset_folders_are_readable_by_others(written_demo, tmp_path):
    """The network datasets were left 0700 by mkdtemp while the site folders are 0755."""
    from fluxpart import batch
    from fluxpart.store import read_table

    folder = written_demo[1]
    outcome = batch.SiteOutcome(key="quillmoor", config="site.toml", directory=str(folder),
                                status="written", site=read_manifest(folder)["site"],
                                annual=read_table(folder / "annual.parquet"))
    out = tmp_path / "network"
    out.mkdir()
    with _umask(0o022):
        batch._write_network([outcome], out)
    for name in batch.NETWORK_DATASETS.values():
        assert stat.S_IMODE((out / name).stat().st_mode) == 0o755, name


@pytest.mark.parametrize(("mask", "folder", "file"), [(0o022, 0o755, 0o644),
                                                      (0o077, 0o700, 0o600),
                                                      (0o002, 0o775, 0o664)])
def test_result_modes_follow_the_umask(tmp_path, mask, folder, file):
    """A private umask keeps the result private; a group-writable one shares it."""
    with _umask(mask):
        process_site_config(make_bundle(tmp_path)).write(tmp_path / "out")
    out = tmp_path / "out"
    assert stat.S_IMODE(out.stat().st_mode) == folder
    for path in out.iterdir():
        if path.is_file() and not path.name.startswith("."):
            assert stat.S_IMODE(path.stat().st_mode) == file, path.name


@pytest.fixture(scope="module")
def bundle(tmp_path_factory):
    """A short bundle: site config, input and the result folder `out` beside them."""
    root = tmp_path_factory.mktemp("bundle3")
    process_site_config(make_bundle(root)).write(root / "out")
    return root


def test_verify_does_not_call_another_fluxpart_release_a_last_digit_matter(copy, capsys):
    """A result of another release: verify said its numbers 'may differ in their last
    digits', which a changed method (0.8.0 changed the gap filling) contradicts."""
    path = copy / "out" / "manifest.json"
    manifest = json.loads(path.read_text(encoding="utf-8"))
    manifest["versions"]["fluxpart"] = "0.7.0"
    manifest["seal"] = manifest_seal(manifest)
    path.write_text(json.dumps(manifest, indent=2), encoding="utf-8")
    assert main(["verify", str(copy / "out")]) == 0
    line = next(line for line in capsys.readouterr().out.splitlines()
                if "written by fluxpart 0.7.0" in line)
    assert "last digits" not in line and "more than rounding" in line


def test_verify_follows_a_config_edited_in_place_to_a_renamed_input(copy, capsys):
    """The README lets an auditor edit only [input] path to point at a moved input; at the
    recorded place (no --config) verify ignored the edit and asked for --input."""
    (copy / "tower.csv").rename(copy / "tower-2021.csv")
    config = copy / "site.toml"
    config.write_text(config.read_text(encoding="utf-8").replace(
        'path = "tower.csv"', 'path = "tower-2021.csv"'), encoding="utf-8")
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "at most in [input] path" in out


def test_verify_names_a_missing_table_in_one_sentence(copy, capsys):
    """It printed 'audit: audit.parquet, is listed in the manifest but missing'."""
    (copy / "out" / "audit.parquet").unlink()
    assert main(["verify", str(copy / "out")]) == 1
    assert ("audit: audit.parquet is listed in the manifest but missing from the folder"
            in capsys.readouterr().out)


def test_diff_names_a_platform_fact_without_empty_first_and_second(copy, capsys):
    """It printed "platform machine (x86_64 vs aarch64)  first   second " with nothing after
    either word."""
    shutil.copytree(copy / "out", copy / "other")
    path = copy / "other" / "manifest.json"
    manifest = json.loads(path.read_text(encoding="utf-8"))
    manifest["platform"]["machine"] = "pdp11"
    manifest["seal"] = manifest_seal(manifest)
    path.write_text(json.dumps(manifest, indent=2), encoding="utf-8")
    # a fact of the run, not of the result: exit 0 since leftovers51, listed apart
    assert main(["diff", str(copy / "out"), str(copy / "other")]) == 0
    lines = capsys.readouterr().out.splitlines()
    heading = lines.index("platform (facts of the run, not of the result):")
    line = lines[heading + 1]
    assert line == "  machine (x86_64 vs pdp11)" or line.endswith("vs pdp11)")
    assert "first" not in line


def test_netcdf_coordinates_carry_no_fill_value(written_demo, tmp_path):
    """CF-1.10 section 2.5.1 (Eaton et al. 2022): "Missing data is not allowed in
    coordinate variables" (m). xarray gave time, day, lat and lon a _FillValue of NaN,
    which declares that they may be missing; read here with h5netcdf, not xarray."""
    h5netcdf = pytest.importorskip("h5netcdf")
    pytest.importorskip("xarray")
    path = tmp_path / "site.nc"
    assert main(["export", str(written_demo[1]), "--netcdf", str(path)]) == 0
    with h5netcdf.File(path, "r") as file:
        for name in ("time", "day", "lat", "lon"):
            assert "_FillValue" not in file.variables[name].attrs, name
        assert "_FillValue" in file.variables["nee"].attrs      # data keep theirs (NaN)


def test_a_glob_beside_the_network_file_does_not_list_it_as_a_site(tmp_path):
    """sites = ["*.toml"] beside SITES.toml listed SITES.toml itself as a site, which then
    failed in every batch ("top-level table [batch] is unknown"), exit 1."""
    from fluxpart.batch import read_sites_file
    from fluxpart.errors import ConfigError

    write_example(tmp_path)
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["*.toml"]\n', encoding="utf-8")
    assert [key for key, _ in read_sites_file(sites).sites] == ["quillmoor_grassland"]
    sites.write_text('[batch]\nsites = ["SITES.toml"]\n', encoding="utf-8")
    with pytest.raises(ConfigError, match="is the network file itself"):
        read_sites_file(sites)


def test_a_glob_does_not_list_other_network_files_as_sites(tmp_path):
    """Two network files beside the sites (one per year) and sites = ["*.toml"]: each
    listed the other as a site, which failed ("top-level table [batch] is unknown") in
    every batch (review, round five). A TOML file with a [batch] table is not a site."""
    from fluxpart.batch import read_sites_file

    write_example(tmp_path)
    for name in ("network-2021.toml", "network-2022.toml"):
        (tmp_path / name).write_text('[batch]\nsites = ["*.toml"]\n', encoding="utf-8")
    for name in ("network-2021.toml", "network-2022.toml"):
        keys = [key for key, _ in read_sites_file(tmp_path / name).sites]
        assert keys == ["quillmoor_grassland"], name
