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
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main

xr = pytest.importorskip("xarray")
pytest.importorskip("h5netcdf")

KG_C_PER_UMOL_CO2 = 12.011e-9       # IUPAC 12.011 g mol-1 (m), one C per CO2
#: README's keywords for site-years in a row. xarray 2026.9 warns that its defaults will
#: become compat="override" and join="exact": the first drops the second year's records
#: (17,520 NaN), the second refuses the files; data_vars="all", today's default, spreads
#: every variable over the four time axes (round modeller26).
RECIPE = {"data_vars": "minimal", "compat": "no_conflicts", "join": "outer",
          "combine_attrs": "drop_conflicts"}
#: README's keywords for sites side by side (a new dimension ``station``): their UTC
#: record axes differ, which join="exact" refuses.
STATIONS = {"data_vars": "all", "coords": "different", "compat": "equals", "join": "outer",
            "combine_attrs": "drop_conflicts"}


@pytest.fixture(scope="module")
def two_years(written_demo, tmp_path_factory):
    """The demo site's 2020 (a leap year, processed here with few draws) and the shared
    2021 result folder (`written_demo`), each exported by the command line:
    ([folder 2020, folder 2021], [file 2020, file 2021])."""
    import fluxpart
    from fluxpart import demo

    root = tmp_path_factory.mktemp("merges")
    frame, _ = demo.site_year(seed=1, year=2020)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        result = fluxpart.process(frame, demo.site(), fluxpart.Config(
            ustar_bootstrap_draws=0, random_error_draws=20))
    folders = [result.write(root / "2020"), written_demo[1]]
    files = [root / "site-2020.nc", root / "site-2021.nc"]
    for folder, path in zip(folders, files, strict=True):
        assert main(["export", str(folder), "--netcdf", str(path)]) == 0
    return folders, files


def test_two_site_years_merge_record_by_record_with_the_readmes_recipe(two_years, capsys):
    """README's ``open_mfdataset(files, **RECIPE)``: each axis is joined along itself (xarray's default spread each
    variable over all four axes: ``nee`` 2 x 24 x 731 x 35,088 values, 9.8 GB); the records
    of both years come back, every one equal to its Parquet ``nee_filled`` x 12.011e-9 kg C
    per µmol CO2, the cell bounds (CF 7.1) meet without gap or overlap across the years and
    the leap day is there (Gregorian calendar); days, months and budget years carry their
    tables' labels and sums."""
    folders, files = two_years
    capsys.readouterr()
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    for keywords, call in ((RECIPE, "xr.open_mfdataset("), (STATIONS, 'dim="station"')):
        shown = readme[readme.index(call):readme.index(")\n", readme.index(call))]
        assert all(f'{key}="{value}"' in shown for key, value in keywords.items()), call
    opened = [xr.open_dataset(path) for path in files]
    try:        # what open_mfdataset(files, **RECIPE) does once it has opened the files
        merged = xr.combine_by_coords(opened, **RECIPE).load()
    finally:
        for dataset in opened:
            dataset.close()
    assert dict(merged.sizes) == {"time": 366 * 48 + 365 * 48, "day": 731, "month": 24,
                                  "year": 2, "nv": 2}
    assert merged["nee"].dims == ("time",)
    series = pd.concat([pd.read_parquet(f / "timeseries.parquet") for f in folders])
    np.testing.assert_allclose(merged["nee"].to_numpy(),
                               series["nee_filled"].to_numpy() * KG_C_PER_UMOL_CO2,
                               rtol=1e-15, atol=0)
    bounds = merged["time_bounds"].to_numpy()
    assert (bounds[1:, 0] == bounds[:-1, 1]).all()
    assert (np.diff(bounds, axis=1) == np.timedelta64(30, "m")).all()
    offset = pd.Timedelta(hours=merged.attrs["site_utc_offset_hours"])
    assert pd.Timestamp(bounds[0, 0]) + offset == pd.Timestamp("2020-01-01")
    daily = pd.concat([pd.read_parquet(f / "daily.parquet") for f in folders])
    assert list(merged["local_date"].to_numpy()) == list(daily["date"].dt.strftime("%Y-%m-%d"))
    assert "2020-02-29" in merged["local_date"].to_numpy()
    np.testing.assert_array_equal(merged["gpp_daytime_daily_sum"].to_numpy(),
                                  daily["gpp_daytime"].to_numpy())
    monthly = pd.concat([pd.read_parquet(f / "monthly.parquet") for f in folders])
    assert list(merged["local_month"].to_numpy()) == list(monthly["month"].dt.strftime("%Y-%m"))
    annual = pd.concat([pd.read_parquet(f / "annual.parquet") for f in folders])
    assert list(merged["budget_year"].to_numpy()) == [2020, 2021] == list(annual["year"])
    np.testing.assert_array_equal(merged["nee_annual_sum"].to_numpy(), annual["nee"].to_numpy())
    # one site, one release: what both files say is kept
    assert merged.attrs["site_name"] == "Quillmoor grassland (fictional)"
    assert merged.attrs["references"] and merged.attrs["history"]


def test_sites_in_other_time_zones_join_on_the_local_labels(written_demo):
    """Known truth: the demo's records at a second, invented site five hours west of UTC
    (UTC-5; longitude moved with the clock) have the same local days. Their UTC days are
    other cells (CF 7.1): concatenated as stations (CF 9, appendix H.2) on ``day`` the two
    share no day, and on the label ``local_date`` all 365 line up with equal sums, each
    station keeping its own UTC midpoints. Invented site; the demo's records."""
    from fluxpart import __version__ as version

    result, _ = written_demo
    west = dataclasses.replace(result.site, name="Harrowby maize (fictional)",
                               utc_offset=-5.0, longitude=-79.8, latitude=47.0)
    datasets = [result.to_xarray(), dataclasses.replace(result, site=west).to_xarray()]
    # a Result in memory does not know the release that computed it: history says only
    # which one exported it (CF 2.6.2)
    assert datasets[0].attrs["history"] == f"exported to CF-1.10 NetCDF by fluxpart {version}"
    on_utc_days = xr.concat([d["nee_daily_sum"] for d in datasets], dim="station",
                            join="outer")
    assert on_utc_days.sizes["day"] == 2 * 365
    sites = xr.concat([d.swap_dims(day="local_date", month="local_month",
                                   year="budget_year") for d in datasets],
                      dim="station", **STATIONS)
    assert sites.sizes["local_date"] == 365 and sites.sizes["station"] == 2
    assert sites["nee_daily_sum"].dims == ("station", "local_date")
    np.testing.assert_array_equal(sites["nee_daily_sum"][0], sites["nee_daily_sum"][1])
    assert list(sites["station_name"].to_numpy()) == [result.site.name, west.name]
    assert list(sites["lat"].to_numpy()) == [result.site.latitude, 47.0]
    shift = sites["day"][1].to_numpy() - sites["day"][0].to_numpy()
    assert (shift == np.timedelta64(6, "h")).all()
    # a site fact the files do not share is dropped, not taken from the first file
    assert "site_name" not in sites.attrs and "site_utc_offset_hours" not in sites.attrs


def test_a_repositorys_global_attributes_and_each_fluxs_sign(two_years):
    """CF-1.10 2.6.2: ``title``, ``institution``, ``source``, ``history``, ``references``
    and ``comment`` are non-empty text; ``history`` names the release that computed and
    exported the file; ``references`` names the paper of each method the modules cite
    (each name also in that module's References); every carbon flux variable, record and
    period, states its sign (``positive = ...``) in its own ``long_name``."""
    import fluxpart
    from fluxpart import gapfill, uncertainty, ustar
    from fluxpart.partition import daytime, nighttime

    _, files = two_years
    with xr.open_dataset(files[1]) as dataset:
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
