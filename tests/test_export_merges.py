"""A modeller's merges of NetCDF exports (round modeller26): two site-years of one site in a
row, two sites in other time zones side by side, and the global attributes a data
repository reads.

Sources: CF Conventions 1.10 (Eaton et al. 2022), section 2.6.2 (title, institution,
source, history, references), 5.2 (auxiliary coordinates), 7.1 (cell bounds) and 9 with
appendix H.2 (time series of several stations: ``station_name`` with ``cf_role``, ``lat``
and ``lon`` per station); the Gregorian calendar (a fact of the calendar: 2020 has 366
days, 29 February among them); xarray (a general-purpose library) for the merges, as the
README's recipe gives them; IUPAC conventional atomic weight of carbon 12.011 g mol-1 (m).
Invented demo site only (known-truth recovery: the same local records at another UTC
offset, the records of each year as its own result folder wrote them).
"""

import dataclasses
import os
import shutil
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main

xr = pytest.importorskip("xarray")
pytest.importorskip("h5netcdf")

KG_C_PER_UMOL_CO2 = 12.011e-9       # IUPAC 12.011 g mol-1 (m), one C per CO2


def readme_merges():
    """The Python block under README's "Several site-years and sites" paragraph."""
    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    block = text[text.index("**Several site-years and sites in one Dataset.**"):]
    start = block.index("```python\n") + len("```python\n")
    return block[start:block.index("\n```", start)]


@pytest.fixture(scope="module")
def merged(written_demo, tmp_path_factory):
    """README's merges run on real exports: the demo site's 2020 (a leap year, processed
    here with few draws) and the shared 2021 result (`written_demo`), each exported by the
    command line, and the 2021 result at a second, invented site five hours west of UTC
    (UTC-5, longitude moved with the clock: the same local records, known truth).
    Returns (result folders of 2020 and 2021, namespace of the README block)."""
    import fluxpart
    from fluxpart import demo
    from fluxpart.export import write_netcdf

    root = tmp_path_factory.mktemp("merges")
    frame, _ = demo.site_year(seed=1, year=2020)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        result = fluxpart.process(frame, demo.site(), fluxpart.Config(
            ustar_bootstrap_draws=0, random_error_draws=20))
    folders = [result.write(root / "2020"), written_demo[1]]
    for folder, name in zip(folders, ("site-2020.nc", "site-2021.nc"), strict=True):
        assert main(["export", str(folder), "--netcdf", str(root / name)]) == 0
    shutil.copyfile(root / "site-2021.nc", root / "quillmoor.nc")
    west = dataclasses.replace(written_demo[0].site, name="Harrowby maize (fictional)",
                               utc_offset=-5.0, longitude=-79.8, latitude=47.0)
    write_netcdf(dataclasses.replace(written_demo[0], site=west), root / "harrowby.nc")
    namespace = {}
    cwd = os.getcwd()
    try:
        os.chdir(root)
        with warnings.catch_warnings():
            # the block sets every keyword whose default xarray says it will change
            warnings.simplefilter("error", FutureWarning)
            exec(compile(readme_merges(), "README.md", "exec"), namespace)
        for name in ("years", "sites"):
            namespace[name] = namespace[name].load()
    finally:
        os.chdir(cwd)
    yield folders, namespace, root
    for dataset in (namespace["years"], namespace["sites"]):
        dataset.close()


def test_two_site_years_merge_record_by_record_with_the_readmes_recipe(merged):
    """README's site-years: each axis joined along itself (xarray's open_mfdataset spread
    each variable over all four axes: ``nee`` 2 x 24 x 731 x 35,088 values, 9.8 GB). The
    records of both years come back, each equal to its Parquet ``nee_filled`` x 12.011e-9
    kg C per µmol CO2; the cell bounds (CF 7.1) meet without gap or overlap across the
    years; the leap day is there (Gregorian calendar); days, months and budget years carry
    their tables' labels and sums; written again, the coordinates have no _FillValue (CF
    2.5.1) and each flag keeps the type of its flag_values (CF 3.5)."""
    folders, namespace, root = merged
    years = namespace["years"]
    assert dict(years.sizes) == {"time": 366 * 48 + 365 * 48, "day": 731, "month": 24,
                                 "year": 2, "nv": 2}
    assert years["nee"].dims == ("time",) and years["nee_fill_quality"].dtype == np.int8
    series = pd.concat([pd.read_parquet(f / "timeseries.parquet") for f in folders])
    np.testing.assert_allclose(years["nee"].to_numpy(),
                               series["nee_filled"].to_numpy() * KG_C_PER_UMOL_CO2,
                               rtol=1e-15, atol=0)
    assert (years["nee_fill_quality"].to_numpy()
            == series["nee_fill_quality"].cat.codes.to_numpy()).all()
    bounds = years["time_bounds"].to_numpy()
    assert (bounds[1:, 0] == bounds[:-1, 1]).all()
    assert (np.diff(bounds, axis=1) == np.timedelta64(30, "m")).all()
    offset = pd.Timedelta(hours=years.attrs["site_utc_offset_hours"])
    assert pd.Timestamp(bounds[0, 0]) + offset == pd.Timestamp("2020-01-01")
    daily = pd.concat([pd.read_parquet(f / "daily.parquet") for f in folders])
    assert list(years["local_date"].to_numpy()) == list(daily["date"].dt.strftime("%Y-%m-%d"))
    assert "2020-02-29" in years["local_date"].to_numpy()
    np.testing.assert_array_equal(years["gpp_daytime_daily_sum"].to_numpy(),
                                  daily["gpp_daytime"].to_numpy())
    monthly = pd.concat([pd.read_parquet(f / "monthly.parquet") for f in folders])
    assert list(years["local_month"].to_numpy()) == list(monthly["month"].dt.strftime("%Y-%m"))
    annual = pd.concat([pd.read_parquet(f / "annual.parquet") for f in folders])
    assert list(years["budget_year"].to_numpy()) == [2020, 2021] == list(annual["year"])
    # README "For modellers": a budget year holding 29 February has 366 days (17,568 records
    # expected at 30 min) and the annual sum is over all of them (round modeller52)
    assert list(annual["records_expected"]) == [366 * 48, 365 * 48] == list(annual["records"])
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    assert "has 366 days (`records_expected` 17,568 at 30 min)" in " ".join(readme.split())
    np.testing.assert_array_equal(years["nee_annual_sum"].to_numpy(), annual["nee"].to_numpy())
    # one site, one release: what both files say is kept
    assert years.attrs["site_name"] == "Quillmoor grassland (fictional)"
    assert years.attrs["references"] and years.attrs["history"]
    years.to_netcdf(root / "years.nc")
    with xr.open_dataset(root / "years.nc", decode_cf=False) as written:
        for name in ("time", "day", "month", "year", "time_bounds", "day_bounds"):
            assert "_FillValue" not in written[name].attrs, name
        for name, variable in written.data_vars.items():
            if "flag_values" in variable.attrs:
                assert variable.dtype == variable.attrs["flag_values"].dtype, name


def test_sites_in_other_time_zones_join_on_the_local_labels(merged, written_demo):
    """README's sites side by side (CF 9, appendix H.2: ``station_name``, ``lat``, ``lon``
    per station). The second site's UTC days are other cells (CF 7.1), so on ``day`` the two
    share none; on ``local_date`` all 365 line up with equal sums (the same local records),
    each station keeping its own UTC midpoints, 6 h apart; the record axis is the union of
    both sites' UTC records."""
    from fluxpart import __version__ as version

    _, namespace, root = merged
    sites = namespace["sites"]
    result = written_demo[0]
    assert sites.sizes["local_date"] == 365 and sites.sizes["station"] == 2
    assert sites.sizes["time"] == 17520 + 6 * 2
    assert sites["nee_daily_sum"].dims == ("station", "local_date")
    np.testing.assert_array_equal(sites["nee_daily_sum"][0], sites["nee_daily_sum"][1])
    assert list(sites["station_name"].to_numpy()) == [result.site.name,
                                                      "Harrowby maize (fictional)"]
    assert list(sites["lat"].to_numpy()) == [result.site.latitude, 47.0]
    shift = sites["day"][1].to_numpy() - sites["day"][0].to_numpy()
    assert (shift == np.timedelta64(6, "h")).all()
    with xr.open_dataset(root / "quillmoor.nc") as one, \
            xr.open_dataset(root / "harrowby.nc") as other:
        assert not set(one["day"].to_numpy()) & set(other["day"].to_numpy())
        # a Result in memory does not know the release that computed it: history says
        # only which one exported it (CF 2.6.2)
        assert other.attrs["history"] == f"exported to CF-1.10 NetCDF by fluxpart {version}"
    # a site fact the files do not share is dropped, not taken from the first file
    assert "site_name" not in sites.attrs and "site_utc_offset_hours" not in sites.attrs


def test_a_repositorys_global_attributes_and_each_fluxs_sign(merged):
    """CF-1.10 2.6.2: ``title``, ``institution``, ``source``, ``history``, ``references``
    and ``comment`` are non-empty text; ``history`` names the release that computed and
    exported the file; ``references`` names the paper of each method the modules cite
    (each name also in that module's References); every carbon flux variable, record and
    period, states its sign (``positive = ...``) in its own ``long_name``."""
    import fluxpart
    from fluxpart import gapfill, uncertainty, ustar
    from fluxpart.partition import daytime, nighttime

    _, _, root = merged
    with xr.open_dataset(root / "site-2021.nc") as dataset:
        attrs = dataset.attrs
        for key in ("title", "institution", "source", "history", "references", "comment"):
            assert isinstance(attrs[key], str) and attrs[key].strip(), key
        assert attrs["history"].count(f"fluxpart {fluxpart.__version__}") == 1
        assert attrs["institution"].startswith("not stated")
        for name, module in (("Reichstein", gapfill), ("Lloyd", nighttime),
                             ("Lasslop", daytime), ("Papale", ustar), ("Barr", ustar),
                             ("Richardson", uncertainty)):
            assert name in attrs["references"] and name in module.__doc__ + "".join(
                getattr(module, f).__doc__ or "" for f in dir(module)
                if callable(getattr(module, f))), name
        fluxes = [name for name in dataset.data_vars
                  if name.split("_")[0] in {"nee", "nep", "gpp", "reco"}
                  and dataset[name].attrs.get("cell_methods")]
        assert len(fluxes) == 6 + 5 * 2 * 3
        for name in fluxes:
            assert "positive = " in dataset[name].attrs["long_name"], name


def test_a_monthly_mean_converts_to_grams_per_day_and_a_sum_per_month_does_not(merged):
    """README: for g C m-2 d-1 per month convert the monthly mean, not the sum. cf_units
    (UDUNITS-2) converts the mean [kg m-2 s-1] to g m-2 d-1, which x the 29 days of
    February 2020 (Gregorian calendar; a complete month) gives the month's sum; the sum
    read as g m-2 month-1 (UDUNITS' month: 30.44 days) is 5 % off."""
    cf_units = pytest.importorskip("cf_units")
    years = merged[1]["years"]
    february = years.isel(month=list(years["local_month"].to_numpy()).index("2020-02"))
    assert float(february["share_present_monthly"]) == 1.0
    per_day = cf_units.Unit(february["gpp_daytime_monthly_mean"].attrs["units"]).convert(
        float(february["gpp_daytime_monthly_mean"]), cf_units.Unit("g m-2 d-1"))
    total = float(february["gpp_daytime_monthly_sum"])
    assert per_day * 29 == pytest.approx(total, rel=1e-12)
    per_udunits_month = cf_units.Unit("g m-2 month-1").convert(total, cf_units.Unit("g m-2 d-1"))
    assert per_udunits_month * 29 / total == pytest.approx(29 / 30.4368, rel=1e-4)
