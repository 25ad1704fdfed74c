"""CF-1.10 NetCDF export, reopened with xarray as a modeller would (issue 15)."""

import errno
import os
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main
from fluxpart.export import STANDARD_NAMES, to_xarray, write_netcdf

xr = pytest.importorskip("xarray")
pytest.importorskip("h5netcdf")
cf_units = pytest.importorskip("cf_units")


@pytest.fixture(scope="module")
def exported(written_demo, tmp_path_factory):
    """The shared demo result folder exported by the command line and reopened."""
    result, folder = written_demo
    path = tmp_path_factory.mktemp("netcdf") / "site.nc"
    assert main(["export", str(folder), "--netcdf", str(path)]) == 0
    with xr.open_dataset(path) as dataset:
        yield result, dataset.load()


def test_carbon_fluxes_in_kg_per_m2_s(exported):
    """Record fluxes are kg C m-2 s-1: µmol CO2 m-2 s-1 x 12.011e-9 (IUPAC C = 12.011)."""
    result, dataset = exported
    series = result.timeseries
    for name, column in (("nee", "nee_filled"), ("gpp_daytime", "gpp_daytime"),
                         ("reco_nighttime", "reco_nighttime")):
        assert dataset[name].attrs["units"] == "kg m-2 s-1"
        np.testing.assert_allclose(dataset[name].to_numpy(),
                                   series[column].to_numpy(dtype=float) * 12.011e-9,
                                   rtol=1e-12, equal_nan=True)
    np.testing.assert_allclose(dataset["nep"].to_numpy(), -dataset["nee"].to_numpy())
    assert dataset["gpp_nighttime"].attrs["standard_name"] == \
        "gross_primary_productivity_of_biomass_expressed_as_carbon"


def test_every_unit_is_udunits(exported):
    """Every variable's units parse with UDUNITS-2 (cf_units 3.x `Unit`)."""
    _, dataset = exported
    for name, variable in dataset.variables.items():
        unit = variable.attrs.get("units")
        if unit is not None:
            assert not cf_units.Unit(unit).is_unknown(), (name, unit)


def test_time_is_utc_with_bounds_and_daily_sums_agree(exported):
    """Times are UTC midpoints inside their bounds; the daily sums are the daily table's."""
    result, dataset = exported
    offset = pd.Timedelta(hours=result.site.utc_offset)
    first = result.timeseries.index[0]
    assert pd.Timestamp(dataset["time_bounds"].values[0, 0]) == first - offset
    assert pd.Timestamp(dataset["time"].values[0]) == first - offset + pd.Timedelta(minutes=15)
    assert dataset["time"].attrs["bounds"] == "time_bounds"
    assert pd.Timestamp(dataset["day_bounds"].values[0, 1]) - \
        pd.Timestamp(dataset["day_bounds"].values[0, 0]) == pd.Timedelta(days=1)
    np.testing.assert_allclose(dataset["gpp_daytime_daily_sum"].to_numpy(),
                               result.daily["gpp_daytime"].to_numpy(dtype=float), rtol=1e-12)
    # a daily mean flux times the seconds of the day's records gives the sum back
    seconds = result.daily["records"].to_numpy(dtype=float) * 1800.0
    np.testing.assert_allclose(dataset["nee_daily_mean"].to_numpy() * seconds * 1e3,
                               result.daily["nee"].to_numpy(dtype=float), rtol=1e-12)
    assert dataset["nee"].attrs["cell_methods"] == "time: mean"
    assert dataset["nee_daily_sum"].attrs["cell_methods"] == \
        "day: sum (interval: 30 min comment: over the records present)"
    # free text after a method goes in parentheses as "comment: ..." after the standardized
    # "interval: <spacing of the records> <unit>": CF conventions 1.10, sections 7.3.2 and
    # 7.3.3 (the keyword comment: alone is to be omitted, as the IOOS compliance checker
    # 6.1.0 reports); the interval's unit parses with UDUNITS-2 (cf_units)
    method = dataset["nee_daily_mean"].attrs["cell_methods"]
    assert method.startswith("day: mean (interval: 30 min comment: ") and method.endswith(")")
    assert cf_units.Unit("30 min").convert(1.0, cf_units.Unit("s")) == 1800.0


def test_flags_explain_themselves(exported):
    """flag_values/flag_meanings decode to the labels of the Parquet column (CF §3.5)."""
    result, dataset = exported
    flag = dataset["nee_fill_quality"]
    meanings = flag.attrs["flag_meanings"].split()
    assert meanings[:4] == ["measured", "A", "B", "C"] and "unfilled" in meanings
    decoded = np.array(meanings)[flag.to_numpy().astype(int)]
    np.testing.assert_array_equal(decoded, result.timeseries["nee_fill_quality"].astype(str))
    assert "nee_fill_quality" in dataset["nee"].attrs["ancillary_variables"]
    assert "low_ustar" in dataset["rejection_reason"].attrs["flag_meanings"].split()


def test_every_flag_meaning_is_explained(exported):
    """The words of ``flag_meanings`` name the labels ("measured A B C interpolated
    unfilled") but not what A, B or C mean; a NetCDF reader had no other place to learn
    it (the Parquet and CSV columns carry a description). Each flag variable now has a
    ``comment`` (CF conventions 1.10, section 2.6.2: "miscellaneous information about the
    data or methods used to produce it") equal to its column's description in the
    result's tables, in which every one of its flag meanings appears."""
    result, dataset = exported
    flags = [name for name, variable in dataset.data_vars.items()
             if "flag_meanings" in variable.attrs]
    assert {"nee_fill_quality", "rejection_reason", "tair_fill_quality"} <= set(flags)
    for name in flags:
        comment = dataset[name].attrs["comment"]
        assert comment == result.timeseries.attrs["descriptions"][name], name
        for meaning in dataset[name].attrs["flag_meanings"].split():
            assert meaning in comment, (name, meaning)
    assert "marginal distribution sampling" in dataset["nee_fill_quality"].attrs["comment"]


def test_gap_filled_drivers_say_which_values_were_filled(exported):
    """Each gap-filled driver links a flag variable telling measured from filled values
    (CF conventions 1.10, section 3.4 ancillary data and 3.5 flags): a modeller forcing a
    model with Tair or Rg from the file must see which values were filled (review round
    thirteen: rg, tair, vpd and tsoil were marked "gap-filled" with no flag)."""
    result, dataset = exported
    series = result.timeseries
    drivers = [name for name in ("rg", "tair", "vpd", "tsoil") if name in dataset]
    assert drivers
    for name in drivers:
        flag_name = dataset[name].attrs["ancillary_variables"]
        assert flag_name == f"{name}_fill_quality"
        flag = dataset[flag_name]
        meanings = flag.attrs["flag_meanings"].split()
        assert len(meanings) == len(flag.attrs["flag_values"])
        decoded = np.array(meanings)[flag.to_numpy().astype(int)]
        np.testing.assert_array_equal(decoded, series[flag_name].astype(str))
        # the demo's drivers have gaps: both measured and filled values are in the file
        assert "measured" in set(decoded) and set(decoded) - {"measured"}
    # u* and RH are exported as measured (missing = NaN), so they carry no fill flag
    assert "ancillary_variables" not in dataset["ustar"].attrs
    # u* has a CF standard name (CF standard name table version 93: canonical units m s-1,
    # which the exported unit is in UDUNITS-2; round modeller25)
    assert dataset["ustar"].attrs["standard_name"] == \
        "magnitude_of_surface_friction_velocity_in_air"
    assert cf_units.Unit(dataset["ustar"].attrs["units"]) == cf_units.Unit("m s-1")


def test_daily_sums_link_their_uncertainty_and_coverage(exported):
    """Each daily sum names its 1-sigma and the day's measured share as ancillary
    variables (CF conventions 1.10, section 3.4: "ancillary_variables" lists the
    variables that describe a data variable, such as its standard error), so a modeller
    who selects gpp_daytime_daily_sum finds its uncertainty. Review round eighteen: the
    sigma variables stood in the file unlinked."""
    result, dataset = exported
    sums = [name for name in dataset.data_vars if name.endswith("_daily_sum")]
    assert sums
    for name in sums:
        linked = dataset[name].attrs["ancillary_variables"].split()
        assert linked == [f"{name}_sigma", "share_measured_daily", "share_present_daily"]
        for other in linked:
            assert dataset[other].dims == dataset[name].dims
        flux = name.removesuffix("_daily_sum")
        np.testing.assert_array_equal(dataset[f"{name}_sigma"].to_numpy(),
                                      result.daily[f"{flux}_sigma"].to_numpy())


def test_site_and_conventions_are_global_attributes(exported):
    """The site, CF version, feature type and the caution travel with the file."""
    result, dataset = exported
    attrs = dataset.attrs
    assert attrs["Conventions"] == "CF-1.10" and attrs["featureType"] == "timeSeries"
    assert attrs["site_name"] == result.site.name
    assert attrs["site_utc_offset_hours"] == result.site.utc_offset
    assert float(dataset["lat"]) == result.site.latitude
    assert dataset["lat"].attrs["units"] == "degrees_north"
    assert "certified" in attrs["comment"]
    # what NEE leaves out and that a net uptake is no credited removal (leftovers57)
    from fluxpart.manifest import TONNES_CAUTION
    assert TONNES_CAUTION in attrs["comment"] and "credited removal" in attrs["comment"]
    assert set(STANDARD_NAMES.values()) >= {dataset["rg"].attrs["standard_name"]}


def test_to_xarray_on_the_result_matches_the_loaded_folder(written_demo, tmp_path):
    """`Result.to_xarray()` in memory gives what the export of its folder gives."""
    result, folder = written_demo
    in_memory = result.to_xarray()
    from_folder = to_xarray(folder)
    xr.testing.assert_allclose(in_memory[["nee", "gpp_daytime_daily_sum"]],
                               from_folder[["nee", "gpp_daytime_daily_sum"]])
    path = write_netcdf(result, tmp_path / "sub" / "x.nc")
    assert path.exists() and [p.name for p in Path(path).parent.iterdir()] == ["x.nc"]


def test_export_of_a_missing_folder_is_one_error_line(tmp_path, capsys):
    """A folder that is not a result gives exit 2 and one `error:` line naming it."""
    status = main(["export", str(tmp_path / "nothing"), "--netcdf", str(tmp_path / "x.nc")])
    err = capsys.readouterr().err
    assert status == 2 and err.startswith("error:") and "nothing" in err
    assert not (tmp_path / "x.nc").exists()


def test_version_flag_prints_the_package_version(capsys):
    """`fluxpart --version` prints the one version the package and its metadata share."""
    import fluxpart

    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0
    assert capsys.readouterr().out.strip() == f"fluxpart {fluxpart.__version__}"


def test_export_onto_a_folder_is_one_error_line(written_demo, tmp_path, capsys):
    """--netcdf naming an existing folder: one error line and exit 2, no traceback (review)."""
    _, folder = written_demo
    assert main(["export", str(folder), "--netcdf", str(tmp_path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and "is a folder" in err[0]


def test_report_out_naming_a_file_is_one_error_line(written_demo, tmp_path, capsys):
    """report --out naming an existing file: one error line and exit 2 before any figure."""
    _, folder = written_demo
    target = tmp_path / "a-file"
    target.write_text("keep me")
    assert main(["report", str(folder), "--out", str(target), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and "existing file" in err[0]
    assert target.read_text() == "keep me"


@pytest.fixture(scope="module")
def bundle_result(tmp_path_factory):
    """A short run of a site config: its folder records the input file and the config."""
    from bundles import make_bundle

    from fluxpart.pipeline import process_site_config

    root = tmp_path_factory.mktemp("bundle")
    config = make_bundle(root)
    return root, process_site_config(config).write(root / "out")


@pytest.mark.parametrize("victim", ["tower.csv", "site.toml"])
def test_export_never_replaces_the_input_or_the_site_config(bundle_result, capsys, victim):
    """--netcdf naming the run's own input or config: refused, the file unchanged (review:
    the input CSV became HDF5 and verify then failed)."""
    root, folder = bundle_result
    before = (root / victim).read_bytes()
    assert main(["export", str(folder), "--netcdf", str(root / victim)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and victim in err[0]
    assert "computed from" in err[0]
    assert (root / victim).read_bytes() == before


def test_the_netcdf_names_the_result_input_bytes_and_seed(exported, written_demo,
                                                         bundle_result):
    """auditor53: an exported file named the release alone, so a file that travelled
    without its folder could not be tied to a result. Its global attributes now carry the
    manifest's seal, the seed and the code fingerprint as manifest.json records them (read
    with json), and for a run of a site config the SHA-256 of its input (hashlib on the
    file itself) and of the config (fluxpart.manifest.result_links, which the export
    writes; a Result.write folder records neither)."""
    import hashlib
    import json

    from fluxpart.manifest import result_links

    _, dataset = exported
    manifest = json.loads((written_demo[1] / "manifest.json").read_text(encoding="utf-8"))
    assert {k: v for k, v in dataset.attrs.items() if k.startswith("result_")} == {
        "result_manifest_seal": manifest["seal"], "result_seed": manifest["seed"],
        "result_code_sha256": manifest["code"]["sha256"]}
    root, folder = bundle_result
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    links = result_links(manifest)
    assert links["input_sha256"] == hashlib.sha256((root / "tower.csv").read_bytes()
                                                   ).hexdigest()
    assert links["site_config_sha256"] == hashlib.sha256((root / "site.toml").read_bytes()
                                                         ).hexdigest()
    assert links["manifest_seal"] == manifest["seal"]


def test_export_replaces_only_a_netcdf_file_it_wrote(written_demo, tmp_path, capsys):
    """An existing file of another kind (text, or an HDF5 file fluxpart did not write) is
    kept and refused; a NetCDF file an earlier export wrote is replaced."""
    _, folder = written_demo
    notes = tmp_path / "notes.nc"
    notes.write_text("keep me")
    assert main(["export", str(folder), "--netcdf", str(notes)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "fluxpart did not write" in err[0]
    assert notes.read_text() == "keep me"
    foreign = tmp_path / "foreign.nc"
    xr.Dataset({"x": ("t", np.arange(3.0))}, attrs={"source": "another program"}).to_netcdf(
        foreign, engine="h5netcdf")
    before = foreign.read_bytes()
    assert main(["export", str(folder), "--netcdf", str(foreign)]) == 2
    assert foreign.read_bytes() == before
    ours = tmp_path / "ours.nc"
    assert main(["export", str(folder), "--netcdf", str(ours)]) == 0
    ours.write_bytes(ours.read_bytes())            # a new file of the same content
    stamp = ours.stat().st_ino
    capsys.readouterr()
    assert main(["export", str(folder), "--netcdf", str(ours)]) == 0
    assert ours.stat().st_ino != stamp             # replaced by the new export


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EFBIG])
def test_export_on_a_full_disk_is_one_error_line_and_no_file(written_demo, tmp_path,
                                                             monkeypatch, capsys, code):
    """The writer failing part-way (full disk, file-size limit): one error line, exit 2, no
    file and no temporary file left, an existing export unchanged (review: a 64-line
    traceback and a crash at exit)."""
    _, folder = written_demo
    target = tmp_path / "site.nc"
    assert main(["export", str(folder), "--netcdf", str(target)]) == 0
    before = target.read_bytes()
    capsys.readouterr()

    def fail(self, path, *args, **kwargs):
        partial = b"\x89HDF\r\n\x1a\n partial"
        # the h5netcdf engine makes the file in memory (a buffer), netCDF4 at the path
        path.write(partial) if hasattr(path, "write") else Path(path).write_bytes(partial)
        raise OSError(code, f"Can't synchronously write data (file write failed: {code})")

    monkeypatch.setattr(xr.Dataset, "to_netcdf", fail)
    assert main(["export", str(folder), "--netcdf", str(target)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and os.strerror(code) in err[0]
    assert "nothing was written" in err[0]
    assert [p.name for p in tmp_path.iterdir()] == ["site.nc"] and target.read_bytes() == before


def test_export_full_disk_ends_the_process_with_status_2(written_demo, tmp_path):
    """As the `fluxpart` process itself under a file-size limit set for that child only: exit
    status 2, not the SIGSEGV (139) of the HDF5 library's clean-up at exit."""
    import resource
    import subprocess
    import sys

    _, folder = written_demo
    limit = 200_000

    def small_files():
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    done = subprocess.run([sys.executable, "-m", "fluxpart", "export", str(folder), "--netcdf",
                           str(tmp_path / "big.nc")], preexec_fn=small_files,
                          capture_output=True, text=True, timeout=300)
    lines = done.stderr.strip().splitlines()
    assert done.returncode == 2, done.stderr[-2000:]
    assert len(lines) == 1 and "File too large" in lines[0]
    assert list(tmp_path.iterdir()) == []


def test_export_sweeps_the_temporary_file_of_a_killed_export(written_demo, tmp_path):
    """A `.NAME.xxxxxxxx.tmp` a SIGKILLed export left beside the target goes with the next
    export to that name; other files stay (review)."""
    import time

    _, folder = written_demo
    left = tmp_path / ".site.nc.k2j3h4g5.tmp"
    left.write_bytes(b"\x89HDF\r\n\x1a\n half")
    other = tmp_path / ".other.nc.k2j3h4g5.tmp"
    other.write_bytes(b"not ours")
    hour_ago = time.time() - 3600
    for path in (left, other):
        os.utime(path, (hour_ago, hour_ago))
    assert main(["export", str(folder), "--netcdf", str(tmp_path / "site.nc")]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == [other.name, "site.nc"]


def test_export_and_load_know_no_orchestrator():
    """A writer of results reads them through ``fluxpart.result``, not the orchestrator:
    ``export`` and ``load`` import no pipeline, partitioning or gap-filling module
    (the contributor guide's seam: writers know no orchestrator and no method)."""
    import ast
    import subprocess
    import sys

    import fluxpart

    root = Path(fluxpart.__file__).parent
    for name in ("export.py", "result.py"):
        tree = ast.parse((root / name).read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level == 1:
                assert (node.module or "") not in ("pipeline", "partition", "gapfill"), \
                    (name, node.module)
    code = ("import sys, fluxpart, fluxpart.export; fluxpart.load; "
            "print(sorted(m for m in sys.modules if m.startswith('fluxpart.')))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, check=True)
    loaded = set(eval(done.stdout))
    assert not loaded & {"fluxpart.pipeline", "fluxpart.gapfill", "fluxpart.partition"}, loaded


def test_a_day_the_record_begins_or_ends_within_says_how_much_of_it_the_sums_cover():
    """Known-truth recovery on the invented demo site: a record cut to start at noon and
    end at 06:00 holds 24 and 12 of its first and last days' 48 half-hours. Each daily
    sum and mean covers the records present; the file said "day: sum" over day bounds of
    the whole day with nothing to tell a half day's sum from a full day's (a modeller read
    0.18 g C m-2 as the day's NEE). CF conventions 1.10 (m): section 7.3, free text on a
    cell method goes in "(comment: ...)"; section 3.4, "ancillary_variables" names the
    variables describing a data variable's quality."""
    import warnings

    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=1)
    frame = frame.loc["2021-03-15 12:00":"2021-10-20 05:30"]
    site = fluxpart.Site("Cut meadow (fictional)", 49.3, 10.2, 1.0, "short")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        result = fluxpart.process(frame, site)
    dataset = to_xarray(result)
    share = dataset["share_present_daily"].to_numpy()
    assert share[0] == 24 / 48 and share[-1] == 12 / 48
    assert (share[1:-1] == 1.0).all()
    assert dataset["share_present_daily"].attrs["units"] == "1"
    for name in ("nee", "gpp_daytime", "reco_nighttime"):
        assert "share_present_daily" in \
            dataset[f"{name}_daily_sum"].attrs["ancillary_variables"].split()
        assert dataset[f"{name}_daily_mean"].attrs["ancillary_variables"] == \
            f"{name}_daily_mean_sigma share_present_daily"
        assert dataset[f"{name}_daily_sum"].attrs["cell_methods"] == \
            "day: sum (interval: 30 min comment: over the records present)"
    # the first day's sum is the half-hours present, integrated (1800 s each, kg -> g)
    bounds = dataset["day_bounds"].to_numpy()[0]
    inside = (dataset["time"].to_numpy() > bounds[0]) & (dataset["time"].to_numpy() < bounds[1])
    assert inside.sum() == 24
    np.testing.assert_allclose(float(dataset["nee"].to_numpy()[inside].sum()) * 1800 * 1e3,
                               float(dataset["nee_daily_sum"][0]), rtol=1e-12)


def test_the_result_docstring_names_every_parameter_table_and_fill_class(written_demo):
    """A modeller reads ``help(fluxpart.Result)`` for what a result holds (numpy docstring
    convention, common practice): it listed four of the eight parameter tables a run
    writes and left out the fill class ``interpolated`` its drivers carry."""
    import fluxpart

    result, _ = written_demo
    doc = fluxpart.Result.__doc__
    for key in result.parameters:
        assert f"``{key}``" in doc, key
    for label in result.timeseries["tair_fill_quality"].cat.categories:
        assert f'``"{label}"``' in doc, label


def test_record_random_error_says_what_it_is_for_filled_records(exported):
    """Behaviour check of the documented meaning (review22): the NetCDF's nee_random_error
    said "random error of nee" alone, while a filled record carries the larger of the
    modelled measurement error and the spread of the records its fill averaged
    (fluxpart.uncertainty.record_random_error). The comment now says so; checked on the
    written demo: where a fill averaged 5 or more records, the value is at least their
    standard deviation (nee_fill_std), and measured records have no fill spread."""
    result, dataset = exported
    comment = dataset["nee_random_error"].attrs["comment"]
    assert "filled record" in comment and "spread" in comment
    assert "_daily_sum_sigma" in comment and "nee_daily_sum_sigma" in dataset
    series = result.timeseries
    sigma = dataset["nee_random_error"].to_numpy() / 12.011e-9   # back to µmol m-2 s-1
    spread = series["nee_fill_std"].to_numpy(dtype=float)
    averaged = (series["nee_fill_count"].to_numpy(dtype=float) >= 5) & np.isfinite(spread)
    assert averaged.sum() > 1000
    assert np.all(sigma[averaged] >= spread[averaged] * (1 - 1e-9))
    measured = series["nee_fill_quality"].astype(str).to_numpy() == "measured"
    assert np.isnan(spread[measured]).all() and np.isfinite(sigma[measured]).all()


def test_months_and_years_carry_the_budget_tables_with_their_intervals(exported, written_demo):
    """Round modeller22: the NetCDF carried records and days only. Now ``month`` and
    ``year`` axes carry the monthly and annual sums, their 1-sigma and the annual 95 %
    interval; each value equals the Parquet table read with pyarrow (an outside reader),
    and the bounds are the local periods moved to UTC (CF-1.10 section 7.1)."""
    import pyarrow.parquet as pq

    _, dataset = exported
    result, folder = written_demo
    monthly = pq.read_table(folder / "monthly.parquet").to_pandas()
    annual = pq.read_table(folder / "annual.parquet").to_pandas()
    offset = pd.Timedelta(hours=result.site.utc_offset)
    assert dataset.sizes["month"] == len(monthly) and dataset.sizes["year"] == len(annual)
    for name in ("nee", "gpp_nighttime", "gpp_daytime", "reco_nighttime", "reco_daytime"):
        np.testing.assert_array_equal(dataset[f"{name}_monthly_sum"].to_numpy(),
                                      monthly[name].to_numpy(dtype=float))
        np.testing.assert_array_equal(dataset[f"{name}_monthly_sum_sigma"].to_numpy(),
                                      monthly[f"{name}_sigma"].to_numpy(dtype=float))
        np.testing.assert_array_equal(dataset[f"{name}_annual_sum"].to_numpy(),
                                      annual[name].to_numpy(dtype=float))
        np.testing.assert_array_equal(dataset[f"{name}_annual_sum_sigma"].to_numpy(),
                                      annual[f"{name}_uncertainty_total"].to_numpy(dtype=float))
        for end in ("low", "high"):
            np.testing.assert_array_equal(
                dataset[f"{name}_annual_sum_ci95_{end}"].to_numpy(),
                annual[f"{name}_ci95_{end}"].to_numpy(dtype=float))
        links = dataset[f"{name}_annual_sum"].attrs["ancillary_variables"].split()
        assert {f"{name}_annual_sum_ci95_low", f"{name}_annual_sum_ci95_high",
                f"{name}_annual_sum_sigma", "share_present_annual"} <= set(links)
        assert all(link in dataset.variables for link in links)
        assert dataset[f"{name}_monthly_sum"].attrs["cell_methods"] == \
            "month: sum (interval: 30 min comment: over the records present)"
        assert dataset[f"{name}_annual_sum"].attrs["cell_methods"] == \
            "year: sum (interval: 30 min comment: over the records present)"
        # the interval brackets the sum (a fact of any 95 % interval around its estimate)
        assert (dataset[f"{name}_annual_sum_ci95_low"] < dataset[f"{name}_annual_sum"]).all()
        assert (dataset[f"{name}_annual_sum_ci95_high"] > dataset[f"{name}_annual_sum"]).all()
    np.testing.assert_array_equal(dataset["ustar_threshold_annual"].to_numpy(),
                                  annual["ustar_threshold"].to_numpy(dtype=float))
    starts = pd.DatetimeIndex(monthly["month"]) - offset
    assert (pd.DatetimeIndex(dataset["month_bounds"].values[:, 0]) == starts).all()
    assert pd.Timestamp(dataset["month_bounds"].values[1, 0]) == \
        pd.Timestamp(dataset["month_bounds"].values[0, 1])
    assert pd.Timestamp(dataset["year_bounds"].values[0, 0]) == \
        pd.Timestamp(annual["period_start"].iloc[0]) - offset
    assert pd.Timestamp(dataset["year_bounds"].values[0, 1]) == \
        pd.Timestamp(annual["period_end"].iloc[0]) - offset
    for axis in ("month", "year"):
        assert dataset[axis].attrs["bounds"] == f"{axis}_bounds"
        middle = dataset[axis].values
        assert ((dataset[f"{axis}_bounds"].values[:, 0] < middle)
                & (middle < dataset[f"{axis}_bounds"].values[:, 1])).all()
        # the cell is of local standard time, its middle is stated in UTC (review58: the
        # year's read "budget year (...), local standard time, UTC")
        assert re.fullmatch(r"middle of the [a-z ]+ of local standard time[^,]*, UTC",
                            dataset[axis].attrs["long_name"]), dataset[axis].attrs["long_name"]


def test_month_and_year_variables_have_udunits_units_and_valid_cell_methods(exported):
    """Every month/year variable's units parse with UDUNITS-2 (cf_units) and a sum in g m-2
    converts to 1e-3 kg m-2; each cell_methods names a dimension of its variable (CF-1.10
    section 7.3: "name: method", name a dimension or standard name)."""
    _, dataset = exported
    periodic = [name for name, variable in dataset.data_vars.items()
                if set(variable.dims) & {"month", "year"}]
    assert len(periodic) > 40
    for name in periodic:
        unit = dataset[name].attrs.get("units")
        if "bounds" in name:
            continue
        assert unit is not None and not cf_units.Unit(unit).is_unknown(), (name, unit)
    assert cf_units.Unit(dataset["nee_annual_sum"].attrs["units"]).convert(
        1.0, cf_units.Unit("kg m-2")) == pytest.approx(1e-3)
    for name, variable in dataset.data_vars.items():
        method = variable.attrs.get("cell_methods")
        if method:
            assert method.split(":")[0] in variable.dims, (name, method)


def test_monthly_sums_add_to_the_annual_budget_and_means_give_the_sums(exported, written_demo):
    """Accounting identity on the demo's complete calendar year: the twelve monthly sums add
    to the annual sum; a monthly mean flux [kg m-2 s-1] times the seconds of the month's
    records gives the monthly sum back [g m-2]."""
    _, dataset = exported
    result, _ = written_demo
    for name in ("nee", "gpp_daytime", "reco_nighttime"):
        np.testing.assert_allclose(float(dataset[f"{name}_monthly_sum"].sum()),
                                   float(dataset[f"{name}_annual_sum"][0]), rtol=1e-9)
        seconds = result.monthly["records"].to_numpy(dtype=float) * 1800.0
        np.testing.assert_allclose(dataset[f"{name}_monthly_mean"].to_numpy() * seconds * 1e3,
                                   dataset[f"{name}_monthly_sum"].to_numpy(), rtol=1e-12)
    assert (dataset["share_present_monthly"] == 1.0).all()


def test_a_budget_year_from_july_has_its_own_bounds():
    """Known truth on an invented annual table: a budget year starting 1 July at a site of
    UTC-5 spans 2021-07-01T05:00 to 2022-07-01T05:00 UTC; its mean flux is the sum over the
    seconds of its records (17,520 half-hours, 365 days), kg = g x 1e-3."""
    from fluxpart.export import _period_variables

    annual = pd.DataFrame({"period_start": [pd.Timestamp("2021-07-01")],
                           "period_end": [pd.Timestamp("2022-07-01")],
                           "nee": [-100.0], "records": [17520], "records_expected": [17520],
                           "nee_uncertainty_total": [5.0], "nee_ci95_low": [-109.8],
                           "nee_ci95_high": [-90.2]},
                          index=pd.Index([2021], name="year"))
    variables = {}
    dim, middle, attrs = _period_variables(variables, annual, "year", 30,
                                           pd.Timedelta(hours=-5))
    bounds = variables["year_bounds"][1]
    assert pd.Timestamp(bounds[0, 0]) == pd.Timestamp("2021-07-01 05:00")
    assert pd.Timestamp(bounds[0, 1]) == pd.Timestamp("2022-07-01 05:00")
    # the middle: 182.5 days after the start (153 days to 1 December, then 29.5)
    assert pd.Timestamp(middle[0]) == pd.Timestamp("2021-12-30 17:00")
    assert variables["nee_annual_mean"][1][0] == pytest.approx(-100e-3 / (365 * 86400.0))
    assert variables["nee_annual_sum_ci95_low"][1][0] == -109.8
    assert variables["share_present_annual"][1][0] == 1.0


def test_without_h5py_the_export_is_one_error_line_and_nothing_written(written_demo, tmp_path,
                                                                       monkeypatch, capsys):
    """h5netcdf without h5py (its recent releases install h5py only under an extra of their
    own) and no netCDF4: one ``error:`` line naming h5py, exit 2, no file; before review33
    the write failed inside xarray with an ImportError traceback (fresh ``fluxpart[all]``)."""
    import sys

    _, folder = written_demo
    monkeypatch.setitem(sys.modules, "h5py", None)       # import h5py raises ImportError
    monkeypatch.setitem(sys.modules, "netCDF4", None)
    target = tmp_path / "site.nc"
    assert main(["export", str(folder), "--netcdf", str(target)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and "h5py" in err[0]
    assert f"(or {sys.executable} -m pip install h5py)" in err[0]     # this environment's
    assert list(tmp_path.iterdir()) == []


def test_the_netcdf_extra_names_h5py_where_h5netcdf_leaves_it_to_an_extra():
    """The installed h5netcdf's own package metadata (PEP 508 requirements, read with
    importlib.metadata and packaging) decides: where it requires h5py only under an extra,
    fluxpart's ``netcdf`` extra must name h5py itself, or ``pip install fluxpart[netcdf]``
    installs an export that cannot write (review33)."""
    import importlib.metadata as metadata
    import tomllib

    from packaging.requirements import Requirement

    requirements = [Requirement(text) for text in metadata.requires("h5netcdf") or []]
    h5py = [r for r in requirements if r.name == "h5py"]
    unconditional = any(r.marker is None or r.marker.evaluate({"extra": ""}) for r in h5py)
    root = Path(__file__).resolve().parents[1]
    extras = tomllib.loads((root / "pyproject.toml").read_text())["project"][
        "optional-dependencies"]
    named = {Requirement(text).name for text in extras["netcdf"]}
    assert "h5netcdf" in named
    if not unconditional:
        assert "h5py" in named


def test_a_seed_beyond_64_bits_is_written_as_its_text(tmp_path):
    """review71: the config takes any whole number >= 0 as the seed (numpy's SeedSequence
    takes any, NumPy documentation (m)), but a NetCDF attribute holds at most a 64-bit
    integer (NetCDF-4 data model (m)): a seed of 2**70 had `export --netcdf` fail with a
    traceback. Written as its decimal text, an ordinary seed still as a number."""
    import json

    from fluxpart.export import _engine, _linked

    for seed, expected in ((2 ** 70, str(2 ** 70)), (7, 7)):
        folder = tmp_path / f"result{seed}"
        folder.mkdir()
        (folder / "manifest.json").write_text(json.dumps({"seed": seed, "seal": "ab"}),
                                              encoding="utf-8")
        dataset = _linked(xr.Dataset({"a": ("x", [1.0, 2.0])}), folder)
        dataset.to_netcdf(folder / "out.nc", engine=_engine())
        with xr.open_dataset(folder / "out.nc", engine=_engine()) as reread:
            assert reread.attrs["result_seed"] == expected
            assert reread.attrs["result_manifest_seal"] == "ab"
