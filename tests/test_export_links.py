"""A modeller's links in the NetCDF export (round modeller24): which record series rest on
measured NEE, and which budget year of the annual table each NetCDF year is.

Sources: CF Conventions 1.10 (Eaton et al. 2022), section 3.4 (ancillary data: a variable's
``ancillary_variables`` names the variables that describe its quality), section 5.2 and
5.3 (auxiliary coordinate variables named in ``coordinates``); the Gregorian calendar for
the midpoints (a fact of the calendar: the middle of 1 October 2020 - 1 October 2021 lies
in April 2021); cf_units (UDUNITS-2) for unit conversions; scipy.stats.norm for the 95 %
quantile; Lloyd & Taylor (1994) eq. 11 (reference/lloyd_taylor.toml). Invented demo site
only (known-truth recovery where stated). Round modeller25 adds the means' 1 sigma and the
respiration choices.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main

xr = pytest.importorskip("xarray")
pytest.importorskip("h5netcdf")
cf_units = pytest.importorskip("cf_units")


@pytest.fixture(scope="module")
def exported(written_demo, tmp_path_factory):
    """The shared demo result folder exported by the command line and reopened."""
    result, folder = written_demo
    path = tmp_path_factory.mktemp("links") / "site.nc"
    assert main(["export", str(folder), "--netcdf", str(path)]) == 0
    with xr.open_dataset(path) as dataset:
        yield result, dataset.load()


def test_nep_and_nighttime_gpp_name_the_fill_quality_of_the_nee_they_rest_on(exported):
    """CF-1.10 section 3.4: nep (= -NEE, the variable with the CF standard name) carries
    NEE's flags and random error, and nighttime GPP (Reco - NEE of the same record) NEE's
    fill quality and random error; before modeller24 only ``nee`` named them, so a reader
    choosing by standard name could not select the measured records. The daytime method's
    GPP and both Reco are model output that does not rest on the record's NEE: no link."""
    result, dataset = exported
    assert dataset["nep"].attrs["ancillary_variables"].split() == \
        dataset["nee"].attrs["ancillary_variables"].split()
    linked = dataset["gpp_nighttime"].attrs["ancillary_variables"].split()
    assert linked == ["nee_fill_quality", "nee_random_error"]
    assert "gpp_nighttime" in dataset["nee_random_error"].attrs["comment"]
    for name in ("gpp_daytime", "reco_daytime", "reco_nighttime"):
        assert "ancillary_variables" not in dataset[name].attrs, name
    for name in ("nep", "gpp_nighttime"):
        for other in dataset[name].attrs["ancillary_variables"].split():
            assert dataset[other].dims == dataset[name].dims, (name, other)
    # selecting measured records through the link gives the Parquet's measured records
    flag = dataset["nee_fill_quality"]
    measured = flag.attrs["flag_meanings"].split().index("measured")
    chosen = (flag.to_numpy() == flag.attrs["flag_values"][measured])
    expected = (result.timeseries["nee_fill_quality"] == "measured").to_numpy()
    assert chosen.sum() > 0 and np.array_equal(chosen, expected)
    # the measured records' nep is -NEE as measured, as carbon (x 12.011e-9, IUPAC C)
    np.testing.assert_allclose(dataset["nep"].to_numpy()[chosen],
                               -result.timeseries["nee_measured"].to_numpy()[chosen] * 12.011e-9,
                               rtol=1e-12)


@pytest.fixture(scope="module")
def october_years(tmp_path_factory):
    """The demo year under budget years from 1 October (known truth: labels 2020, 2021)."""
    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=0)
    config = fluxpart.Config(ustar_bootstrap_draws=20, random_error_draws=50,
                             year_start="10-01")
    result = fluxpart.process(frame, demo.site(), config)
    folder = result.write(tmp_path_factory.mktemp("october") / "result")
    path = folder.parent / "site.nc"
    assert main(["export", str(folder), "--netcdf", str(path)]) == 0
    with xr.open_dataset(path) as dataset:
        yield folder, dataset.load()


def test_each_netcdf_year_names_the_budget_year_of_the_annual_table(october_years):
    """Budget years from 1 October are labelled by the calendar year they start in (the
    annual table's ``year``: 2020 for October 2020 - September 2021); the NetCDF ``year``
    coordinate is the UTC midpoint of the period, which lies in April of the next calendar
    year (Gregorian calendar), so ``year.dt.year`` read 2021 and 2022 and a modeller joining
    the NetCDF years to annual.parquet or annual.csv matched the wrong rows. The auxiliary
    coordinate ``budget_year`` (CF-1.10 section 5.2) carries the table's label."""
    folder, dataset = october_years
    annual = pd.read_parquet(folder / "annual.parquet")      # plain pandas, no fluxpart
    assert list(annual["year"]) == [2020, 2021]                 # known truth
    assert list(dataset["year"].dt.year.to_numpy()) == [2021, 2022]   # why a label is needed
    assert list(dataset["budget_year"].to_numpy()) == [2020, 2021]
    assert dataset["budget_year"].dims == ("year",)
    # the label is the year of each period's start in local standard time (Parquet)
    offset = pd.Timedelta(hours=annual.attrs["site"]["utc_offset"])
    starts = pd.DatetimeIndex(dataset["year_bounds"].to_numpy()[:, 0]) + offset
    assert list(starts) == list(pd.DatetimeIndex(annual["period_start"]))
    assert list(starts.year) == list(dataset["budget_year"].to_numpy())
    # and the sums join on it: the NetCDF annual sums are the table's, row by row
    joined = dataset["nee_annual_sum"].to_series().set_axis(dataset["budget_year"].to_numpy())
    np.testing.assert_array_equal(joined.to_numpy(),
                                  annual.set_index("year").loc[joined.index, "nee"].to_numpy())


def test_the_readmes_carbon_factor_converts_the_parquet_to_the_models_units(exported,
                                                                            written_demo):
    """The README tells a modeller reading Parquet with plain pandas how to reach kg C
    m-2 s-1 per record and g C m-2 d-1 per day. Checked with cf_units (UDUNITS-2) for the
    unit part and the IUPAC conventional atomic weight of carbon, 12.011 g mol-1 (m), for
    the substance: the README's factor, applied to the Parquet, gives the NetCDF values,
    and a full day's row of daily.parquet is the NetCDF daily mean in g m-2 d-1."""
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    assert "× 12.011e-9 is kg C m-2 s-1" in readme
    mole = cf_units.Unit("umol m-2 s-1").convert(1.0, cf_units.Unit("mol m-2 s-1"))
    factor = cf_units.Unit("g").convert(mole * 12.011, cf_units.Unit("kg"))
    assert factor == pytest.approx(12.011e-9, rel=1e-15)
    _, folder = written_demo
    _, dataset = exported
    series = pd.read_parquet(folder / "timeseries.parquet")
    for name in ("gpp_daytime", "gpp_nighttime", "reco_daytime", "reco_nighttime"):
        np.testing.assert_allclose(series[name].to_numpy() * factor,
                                   dataset[name].to_numpy(), rtol=1e-13, equal_nan=True)
    daily = pd.read_parquet(folder / "daily.parquet")
    full = (daily["records"] == daily["records_expected"]).to_numpy()
    assert full.sum() >= 360
    per_day = cf_units.Unit("kg m-2 s-1").convert(dataset["gpp_daytime_daily_mean"].to_numpy(),
                                                   cf_units.Unit("g m-2 d-1"))
    np.testing.assert_allclose(per_day[full], daily["gpp_daytime"].to_numpy()[full],
                               rtol=1e-12)
    # and a full day's row is the sum of its records (30 min x 1800 s, kg -> g)
    records = series.set_index("time")["gpp_daytime"] * factor * 1800.0 * 1e3
    by_day = records.groupby(records.index.normalize()).sum().to_numpy()
    np.testing.assert_allclose(by_day[full], daily["gpp_daytime"].to_numpy()[full],
                               rtol=1e-12, atol=1e-12)


@pytest.fixture(scope="module")
def leap_july(tmp_path_factory):
    """Two invented hourly years (2019, and 2020 with 29 February) under budget years from
    1 July, written and exported to NetCDF and CSV."""
    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=2, year=2019, years=2, interval_minutes=60)
    config = fluxpart.Config(ustar_bootstrap_draws=20, random_error_draws=50,
                             year_start="07-01")
    with pytest.warns(fluxpart.FluxpartWarning):
        result = fluxpart.process(frame, demo.site(), config)
    folder = result.write(tmp_path_factory.mktemp("leap") / "result")
    path, csv = folder.parent / "site.nc", folder.parent / "csv"
    assert main(["export", str(folder), "--netcdf", str(path), "--csv", str(csv)]) == 0
    with xr.open_dataset(path) as dataset:
        yield folder, dataset.load(), csv


def test_every_format_sums_the_same_records_over_a_leap_year_and_july_budget_years(leap_july):
    """Known-truth recovery of the sums from the records, format by format: a day, a month
    and a budget year (1 July to 1 July, local standard time) sum their records x 3600 s x
    12.011e-9 kg C per µmol CO2 (IUPAC C, (m)) x 1e3 g/kg; the leap year's February has 29
    days (Gregorian calendar) and its budget year 2019 (July 2019 - June 2020) 366 x 24
    records. Parquet read with plain pandas, CSV with pandas.read_csv, NetCDF with xarray."""
    folder, dataset, csv = leap_july
    series = pd.read_parquet(folder / "timeseries.parquet").set_index("time")
    grams = series[["nee_filled", "gpp_daytime", "gpp_nighttime", "reco_nighttime"]] \
        * 3600.0 * 12.011e-9 * 1e3
    grams = grams.rename(columns={"nee_filled": "nee"})
    tables = {t: pd.read_parquet(folder / f"{t}.parquet") for t in ("daily", "monthly",
                                                                      "annual")}
    texts = {t: pd.read_csv(csv / f"{t}.csv") for t in tables}
    annual = tables["annual"]
    assert list(annual["year"]) == [2018, 2019, 2020]
    full = annual.set_index("year").loc[2019]
    assert full["records_expected"] == 366 * 24 and full["records"] == 366 * 24
    february = tables["daily"]["date"].dt.strftime("%Y-%m").eq("2020-02")
    assert february.sum() == 29
    by_day = grams.groupby(grams.index.normalize()).sum()
    by_month = grams.groupby(grams.index.to_period("M")).sum()
    by_year = [grams[(grams.index >= start) & (grams.index < end)].sum()
               for start, end in zip(annual["period_start"], annual["period_end"],
                                 strict=True)]
    for name in grams.columns:
        for table, expected in (("daily", by_day[name].to_numpy()),
                                ("monthly", by_month[name].to_numpy()),
                                ("annual", np.array([y[name] for y in by_year]))):
            np.testing.assert_allclose(tables[table][name].to_numpy(), expected,
                                       rtol=1e-11, atol=1e-9, err_msg=(table, name))
            np.testing.assert_array_equal(texts[table][name].to_numpy(),
                                          tables[table][name].to_numpy())
        for period, table in (("daily", "daily"), ("monthly", "monthly"), ("annual", "annual")):
            np.testing.assert_array_equal(dataset[f"{name}_{period}_sum"].to_numpy(),
                                          tables[table][name].to_numpy())
    # the NetCDF's year bounds are the budget years' (UTC = local standard time - offset)
    offset = pd.Timedelta(hours=annual.attrs["site"]["utc_offset"])
    starts = pd.DatetimeIndex(dataset["year_bounds"].to_numpy()[:, 0]) + offset
    assert list(starts) == list(pd.DatetimeIndex(annual["period_start"]))
    assert list(dataset["budget_year"].to_numpy()) == [2018, 2019, 2020]


def test_each_period_mean_carries_its_one_sigma_in_the_means_unit(exported, written_demo,
                                                                  leap_july):
    """Round modeller25: a modeller comparing a model's daily, monthly or annual mean flux
    [kg m-2 s-1] found the 1 sigma only for the sum [g m-2], with no word on what it
    covers. Each mean now links ``<flux>_<period>_mean_sigma``: the sum's 1 sigma over the
    seconds of the records present, converted by cf_units (UDUNITS-2) from g m-2 to
    kg m-2; its ``comment`` is the Parquet description of the sigma (what it covers and
    leaves out). Known truth: the annual mean +- z sigma, times the year's seconds, is the
    stated 95 % interval of annual.parquet, with z = the standard normal's 97.5th
    percentile (scipy.stats.norm). GPP's carries the CF standard name with the modifier
    ``standard_error`` (CF-1.10 appendix C, (m)). On the two hourly July budget years too,
    whose first and last are partial (seconds of the records present, not of the year)."""
    from scipy.stats import norm

    _, folder = written_demo
    _, dataset = exported
    tables = {"daily": pd.read_parquet(folder / "daily.parquet"),
              "monthly": pd.read_parquet(folder / "monthly.parquet"),
              "annual": pd.read_parquet(folder / "annual.parquet")}
    grams = cf_units.Unit("g m-2")
    for name in ("nee", "gpp_nighttime", "gpp_daytime", "reco_nighttime", "reco_daytime"):
        for period, table in tables.items():
            column = f"{name}_uncertainty_total" if period == "annual" else f"{name}_sigma"
            seconds = table["records"].to_numpy(dtype=float) * 1800.0
            expected = grams.convert(table[column].to_numpy(), cf_units.Unit("kg m-2")) / seconds
            mean, sigma = dataset[f"{name}_{period}_mean"], dataset[f"{name}_{period}_mean_sigma"]
            np.testing.assert_allclose(sigma.to_numpy(), expected, rtol=1e-12)
            assert sigma.attrs["units"] == mean.attrs["units"] == "kg m-2 s-1"
            assert mean.attrs["ancillary_variables"].split()[0] == sigma.name
            assert sigma.attrs["comment"] == table.attrs["descriptions"][column]
            assert "1 sigma" in sigma.attrs["comment"] and "not included" in sigma.attrs["comment"]
            summed = dataset[f"{name}_{period}_sum_sigma"].attrs["comment"]
            assert summed == sigma.attrs["comment"]
            if name.startswith("gpp"):
                assert sigma.attrs["standard_name"] == \
                    "gross_primary_productivity_of_biomass_expressed_as_carbon standard_error"
        annual = tables["annual"]
        seconds = annual["records"].to_numpy(dtype=float) * 1800.0 * 1e3    # s x (g / kg)
        centre = dataset[f"{name}_annual_mean"].to_numpy() * seconds
        half = norm.ppf(0.975) * dataset[f"{name}_annual_mean_sigma"].to_numpy() * seconds
        np.testing.assert_allclose(centre - half, annual[f"{name}_ci95_low"], rtol=1e-12)
        np.testing.assert_allclose(centre + half, annual[f"{name}_ci95_high"], rtol=1e-12)
        assert "not included" in dataset[f"{name}_annual_sum_ci95_low"].attrs["comment"]
    folder, hourly, _ = leap_july
    annual = pd.read_parquet(folder / "annual.parquet")
    assert (annual["records"] < annual["records_expected"]).sum() == 2     # partial years
    kilograms = hourly["nee_annual_mean_sigma"].to_numpy() * annual["records"] * 3600.0
    np.testing.assert_allclose(kilograms * 1e3, annual["nee_uncertainty_total"], rtol=1e-12)


def test_the_partitioned_series_name_the_respiration_temperature_that_drives_them(
        exported, written_demo):
    """Round modeller25: which temperature drove Reco (air or soil, chosen on the night data)
    and the weight of the constant-Q10 form were in manifest.json only; a modeller reading
    the NetCDF could not tell. Now global attributes give them and each partitioned series
    names them in its ``comment``. Checked against manifest.json read with ``json`` and
    against the paper's equation: Lloyd & Taylor (1994) eq. 11 (reference/lloyd_taylor.toml)
    with the record's Rref and E0 (timeseries.parquet, plain pandas) reproduces the nighttime
    Reco of the NetCDF on the temperature the attribute names (the demo's choice weights
    the constant-Q10 form 0 and delays nothing), and not on the other."""
    import json

    from conftest import load_reference

    _, folder = written_demo
    _, dataset = exported
    recorded = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))["provenance"]
    named = dataset.attrs["respiration_temperature"]
    assert named == recorded["respiration_driver"]["chosen"]
    assert dataset.attrs["respiration_temperature_delay_hours"] == 0.0 == \
        recorded["respiration_driver"]["delay_hours"]
    assert dataset.attrs["respiration_temperature_basis"].startswith("chosen on the night data")
    assert dataset.attrs["respiration_form_share_constant_q10"] == 0.0 == \
        recorded["respiration_form"]["share_applied"]
    constants = load_reference("lloyd_taylor")["constants"]
    series = pd.read_parquet(folder / "timeseries.parquet")
    reco = dataset["reco_nighttime"].to_numpy() / 12.011e-9            # µmol CO2 m-2 s-1

    def lloyd_taylor(celsius):
        kelvin = cf_units.Unit("degC").convert(celsius, cf_units.Unit("K"))
        return series["rref_nighttime"].to_numpy() * np.exp(series["e0_nighttime"].to_numpy() * (
            1 / (constants["tref_kelvin"] - constants["t0_kelvin"])
            - 1 / (kelvin - constants["t0_kelvin"])))

    other = {"tair": "tsoil", "tsoil": "tair"}[named]
    np.testing.assert_allclose(lloyd_taylor(dataset[named].to_numpy()), reco, rtol=1e-9)
    assert np.nanmedian(np.abs(lloyd_taylor(dataset[other].to_numpy()) / reco - 1)) > 0.05
    for name in ("gpp_nighttime", "gpp_daytime", "reco_nighttime", "reco_daytime"):
        for variable in (name, f"{name}_daily_mean", f"{name}_monthly_sum",
                         f"{name}_annual_mean"):
            assert f"respiration temperature of both methods: {named} " in \
                dataset[variable].attrs["comment"], variable
    assert "comment" not in dataset["nee"].attrs and "comment" not in dataset["nee_annual_sum"].attrs


def test_a_result_that_records_no_respiration_choice_names_none(written_demo):
    """A result whose provenance lacks the choices (one a caller built, or an older
    release's) gets no attribute and no comment rather than a guess; a temperature set in
    [processing] is named "as set" with no delay (respiration_driver.resolve applies none)."""
    import dataclasses

    from fluxpart.export import to_xarray
    from fluxpart.respiration_facts import respiration_comment, respiration_facts

    result, _ = written_demo
    bare = to_xarray(dataclasses.replace(result, provenance={}))
    assert not any(key.startswith("respiration") for key in bare.attrs)
    assert "comment" not in bare["reco_nighttime"].attrs
    facts = respiration_facts({"respiration_driver": {"setting": "tsoil"},
                               "respiration_form": {"share_applied": 0.25}})
    assert facts == {"respiration_temperature": "tsoil",
                     "respiration_temperature_delay_hours": 0.0,
                     "respiration_temperature_basis": "as set in [processing] "
                                                      "respiration_driver",
                     "respiration_form_share_constant_q10": 0.25}
    assert "tsoil (soil temperature), delayed 0 h" in respiration_comment(facts)
    assert "weight 0.25 of the constant-Q10 form" in respiration_comment(facts)


def _modeller_blocks():
    """The Python blocks of README's "For modellers" section, in order."""
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    section = readme[readme.index("## For modellers"):readme.index("## Audit workflow")]
    return [block.split("```", 1)[0] for block in section.split("```python\n")[1:]]


def test_the_readmes_first_modeller_blocks_run_as_written_on_a_result_folder(
        written_demo, tmp_path, monkeypatch):
    """Round modeller52 ran every Python block of "For modellers" in a fresh interpreter:
    the reading blocks (fluxpart.load, plain pandas, Polars) are run here as written, in a
    folder whose `out/` is a result folder, and give what their comments say. The signs
    the section states for every table are those of the identity NEE = Reco - GPP (the
    nighttime method's definition, common practice): a day's NEE is its nighttime Reco
    minus its nighttime GPP, and net uptake is negative NEE."""
    pytest.importorskip("polars")
    _, folder = written_demo
    (tmp_path / "out").symlink_to(folder, target_is_directory=True)
    monkeypatch.chdir(tmp_path)
    blocks = _modeller_blocks()
    assert "fluxpart.load" in blocks[0] and "polars" in blocks[1]
    namespace = {}
    for block in blocks[:2]:
        exec(compile(block, "README.md", "exec"), namespace)
    assert namespace["result"].timeseries.attrs["units"]["gpp_daytime"] == "umol m-2 s-1"
    daily = namespace["daily"]
    assert daily.attrs["units"]["gpp_daytime"] == "g m-2"
    assert daily.attrs["descriptions"]["gpp_daytime_sigma"].startswith("1 sigma: total")
    assert namespace["meta"]["columns"]["nee_filled"]["unit"] == "umol m-2 s-1"
    series = namespace["series"]
    assert str(series.index.tz) == "UTC"
    offset = pd.Timedelta(hours=series.attrs["site"]["utc_offset"])
    assert series.index[0] == pd.Timestamp("2021-01-01", tz="UTC") - offset
    assert namespace["dataset"].attrs["Conventions"] == "CF-1.10"
    # the signs the section states
    np.testing.assert_allclose(daily["nee"], daily["reco_nighttime"] - daily["gpp_nighttime"],
                               rtol=0, atol=1e-12)
    assert (daily["gpp_daytime"] >= 0).all() and (daily["reco_daytime"] >= 0).all()
    assert "< 0 is net uptake" in daily.attrs["descriptions"]["nee"]
    assert "positive = uptake" in series.attrs["descriptions"]["gpp_daytime"]
