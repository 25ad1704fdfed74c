"""A new user's path through the README, run as written (round newuser56).

Three new users (a tower scientist, an auditor, a modeller) read the README alone. The
README's site config ("Your own site"), its first-run commands ("Your first run") and its
Python block had never been run by a test: here they are, as written, on a file laid out
as the config says. The terms the outputs use without defining them each time are stated
in the README's "Terms in the outputs", and the modeller's time convention and units in a
table at the top of "For modellers": both are checked against what the code writes and
against their outside sources (Lloyd & Taylor 1994, eq. 11, for Tref and T0; the CF
conventions for the NetCDF time axis).
"""
import re
import shlex
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _section(heading: str) -> str:
    """README's text from `heading` to the next heading of the same or a higher level
    (a line starting with "#" inside a fenced block is a comment, not a heading)."""
    level = len(heading.split(" ", 1)[0])
    lines = README[README.index(f"\n{heading}\n") + 1:].splitlines(keepends=True)
    fenced = False
    for number, line in enumerate(lines[1:], start=1):
        fenced ^= line.startswith("```")
        marks = len(line) - len(line.lstrip("#"))
        if not fenced and 0 < marks <= level and line[marks:marks + 1] == " ":
            return "".join(lines[:number])
    return "".join(lines)


def _block(text: str, language: str) -> str:
    return text.split(f"```{language}\n", 1)[1].split("```", 1)[0]


def _tower_csv(path: Path, config_text: str) -> None:
    """The invented demo site's hourly records in the layout the README's config describes:
    its column names, its time column and format, stamps at interval ends, its missing code
    and VPD in kPa (its `[input.units]`)."""
    import tomllib

    from fluxpart import demo

    config = tomllib.loads(config_text)
    reading = config["input"]
    assert reading["time_marks"] == "end" and config["input"]["units"] == {"vpd": "kPa"}
    frame, _ = demo.site_year(seed=0, interval_minutes=60)
    frame = frame.assign(vpd=frame["vpd"] / 10.0)                    # hPa -> kPa
    length = pd.Timedelta(minutes=60)
    table = pd.DataFrame({reading["time_column"]:
                          (frame.index + length).strftime(reading["time_format"])})
    for canonical, column in reading["columns"].items():
        table[column] = frame[canonical].round(4).to_numpy()
    table = table.fillna(reading["missing"][0])
    table.to_csv(path, index=False)


@pytest.fixture(scope="module")
def first_run(tmp_path_factory):
    """The README's site config saved as my-site.toml beside its tower.csv, and the
    commands of "Your first run" run as written in that folder.

    Two settings are added at the end of its last table, ``[processing]``: few u*
    bootstrap and Monte Carlo draws, as the shared ``written_demo`` takes them (the
    commands and the Python block ran some 50 s at load with the default 100 and 500;
    every line of the README's config is still read, every table still written)."""
    import tomllib

    folder = tmp_path_factory.mktemp("newuser")
    config_text = _block(_section("## Your own site"), "toml")
    quick = config_text + "ustar_bootstrap_draws = 20\nrandom_error_draws = 50\n"
    assert tomllib.loads(quick)["processing"] == tomllib.loads(config_text)["processing"] | {
        "ustar_bootstrap_draws": 20, "random_error_draws": 50}
    (folder / "my-site.toml").write_text(quick, encoding="utf-8")
    _tower_csv(folder / "tower.csv", config_text)
    commands = [line.split("#", 1)[0].strip()
                for line in _block(_section("### Your first run"), "sh").splitlines()]
    commands = [shlex.split(c) for c in commands if c]
    assert [c[:2] for c in commands] == [["fluxpart", "check"], ["fluxpart", "run"],
                                         ["fluxpart", "report"]]
    return folder, commands


def test_the_readmes_config_and_first_run_commands_work_as_written(first_run, capsys,
                                                                   monkeypatch):
    folder, commands = first_run
    monkeypatch.chdir(folder)
    outputs = []
    for command in commands:
        assert main(command[1:]) == 0, command
        outputs.append(capsys.readouterr().out)
    check, run, report = outputs
    assert "problems found: none" in check
    assert (folder / "out" / "manifest.json").is_file()
    assert (folder / "out" / "report" / "report.html").is_file()
    assert "Wrote out/report/report.html" in report
    # run's header says which records count as measured, and the printed share is the
    # share of records kept after screening and the u* filter, below check's "present"
    assert ("share_measured: share of the records with measured NEE (kept after screening "
            "and the u* filter" in run)
    series = pd.read_parquet(folder / "out" / "timeseries.parquet")
    kept = float((series["rejection_reason"].astype(str) == "kept").mean())
    assert kept == float((series["nee_fill_quality"].astype(str) == "measured").mean())
    row = next(line for line in run.splitlines() if line.startswith("2021 "))
    assert row.split()[6] == f"{kept:.2f}"
    present = re.search(r"\nnee +µmol m-2 s-1 +([\d.]+)%", check)
    assert present and kept < float(present.group(1)) / 100


def test_the_readmes_python_block_runs_as_written(first_run, monkeypatch):
    """The "Python" block on the same folder: read, process, write, load, and the demo's
    truth; what its comments say of `result.annual` and `result.timeseries` holds."""
    import warnings

    import fluxpart

    folder, _ = first_run
    monkeypatch.chdir(folder)
    namespace = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        exec(compile(_block(_section("## Python"), "python"), "README.md", "exec"), namespace)
    result, again = namespace["result"], namespace["again"]
    assert result.annual.attrs["units"]["nee"] == "g m-2"
    assert result.annual.index.tolist() == [2021]
    assert {"nee_filled", "gpp_nighttime", "reco_nighttime"} <= set(result.timeseries.columns)
    assert len(result.timeseries) == 8760                       # one row per hourly interval
    pd.testing.assert_frame_equal(again.annual, result.annual)
    assert {"gpp", "reco", "nee"} <= set(namespace["truth"].columns)


def _terms() -> dict:
    """The README's "Terms in the outputs" table: term -> (meaning, unit)."""
    rows = {}
    for line in _section("## Terms in the outputs").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[0] not in ("term", "---"):
            rows[cells[0]] = (cells[1], cells[2])
    return rows


def test_the_terms_table_states_the_units_and_constants_the_code_uses(written_demo):
    """Each symbol's unit in the README's terms table is the unit the parameter tables
    store, and Lloyd–Taylor's constants are those of Lloyd & Taylor (1994), eq. 11:
    Tref = 283.15 K (10 °C), T0 = 227.13 K (as fluxpart.constants holds them)."""
    from fluxpart import constants

    terms = _terms()
    meaning, unit = terms["Lloyd–Taylor, E0, Rref"]
    assert f"Tref = {constants.LLOYD_TAYLOR_TREF_KELVIN:.2f} K (10 °C)" in meaning
    assert f"T0 = {constants.LLOYD_TAYLOR_T0_KELVIN:.2f} K" in meaning
    assert unit == "E0 K; Rref µmol m-2 s-1"
    _, folder = written_demo
    stored = {}
    for table in ("parameters_daytime", "parameters_nighttime_rref", "parameters_nighttime_e0"):
        frame = pd.read_parquet(folder / f"{table}.parquet")
        stored.update({f"{table}.{k}": v for k, v in frame.attrs["units"].items()})
    assert stored["parameters_nighttime_e0.e0"] == "K"
    assert stored["parameters_nighttime_rref.rref"] == "umol m-2 s-1"
    assert (stored["parameters_daytime.alpha"], stored["parameters_daytime.beta0"],
            stored["parameters_daytime.k"]) == ("umol J-1", "umol m-2 s-1", "hPa-1")
    assert terms["α, β0, k"][1] == "α µmol J-1; β0 µmol m-2 s-1; k hPa-1"
    # the fill-quality labels the table explains are the labels the time series holds
    series = pd.read_parquet(folder / "timeseries.parquet")
    labels = set(series["nee_fill_quality"].cat.categories)
    assert labels <= {"measured", "A", "B", "C", "interpolated", "unfilled"}
    assert {"A", "B", "C"} <= labels
    # units "1" and "" mean what the table says: a number without dimension, and labels
    units = series.attrs["units"]
    assert units["nee_fill_quality"] == units["rejection_reason"] == units["time"] == ""
    assert units["nee_flag"] == units["is_night"] == "1"
    assert pd.read_parquet(folder / "daily.parquet").attrs["units"]["share_measured"] == "1"


@pytest.fixture(scope="module")
def exported(written_demo, tmp_path_factory):
    """The shared demo result exported as NetCDF and CSV once: (folder, NetCDF, CSV
    folder)."""
    pytest.importorskip("xarray")
    _, folder = written_demo
    where = tmp_path_factory.mktemp("exported")
    assert main(["export", str(folder), "--netcdf", str(where / "site.nc"), "--csv",
                 str(where / "csv")]) == 0
    return folder, where / "site.nc", where / "csv"


def test_the_modellers_glance_table_says_what_each_format_stamps(exported):
    """The at-a-glance table of "For modellers": Parquet stamps are interval starts in local
    standard time without a zone; the NetCDF's are interval middles in UTC (CF-1.10 cell
    bounds, section 7.1); the CSV's are starts with the ISO 8601 offset."""
    section = _section("## For modellers")
    glance = section[:section.index("The examples read a result folder")]
    assert "| a record's stamp | the **start** of its interval (`time`) | the **middle**" in glance
    folder, nc, csv_folder = exported
    series = pd.read_parquet(folder / "timeseries.parquet")
    offset = pd.Timedelta(hours=series.attrs["site"]["utc_offset"])
    assert series["time"].dt.tz is None
    assert series["time"].iloc[0] == pd.Timestamp("2021-01-01 00:00")
    import xarray as xr

    with xr.open_dataset(nc) as dataset:
        first = pd.Timestamp(dataset["time"].values[0])
        bounds = pd.to_datetime(dataset["time_bounds"].values[0])
    assert first == pd.Timestamp("2021-01-01 00:15") - offset           # middle, in UTC
    assert list(bounds) == [first - pd.Timedelta(minutes=15), first + pd.Timedelta(minutes=15)]
    csv = pd.read_csv(csv_folder / "timeseries.csv", usecols=["time"], nrows=1)
    assert csv["time"].iloc[0] == "2021-01-01T00:00:00+01:00"
    assert np.isclose(offset / pd.Timedelta(hours=1), 1.0)


def test_the_modellers_glance_table_units_quality_and_signs_hold(exported):
    """The glance table's other rows against the files (review89: only the stamps were
    checked): record fluxes in µmol m-2 s-1 in Parquet and CSV and kg m-2 s-1 in the
    NetCDF; sums in g m-2 and the NetCDF's means in kg m-2 s-1; the CSV's units in its
    CSVW metadata (W3C, CSV on the Web, 2015 (m)); quality as text labels, in the NetCDF
    as CF flag variables (CF-1.10, section 3.5); ``nep`` = −NEE there. 1 µmol CO2 m-2 s-1
    is 12.011e-9 kg C m-2 s-1 (the standard atomic weight of carbon, IUPAC)."""
    import json

    import xarray as xr

    section = _section("## For modellers")
    glance = section[:section.index("The examples read a result folder")]
    rows = {cells[1]: cells[2:5] for cells in
            ([c.strip() for c in line.split("|")] for line in glance.splitlines()
             if line.startswith("| ") and not line.startswith("| |"))}
    assert rows["record fluxes"] == ["µmol CO2 m-2 s-1 (`umol m-2 s-1`), the interval's mean",
                                     "kg C m-2 s-1 (`kg m-2 s-1`)", "as Parquet"]
    folder, nc, csv_folder = exported
    series = pd.read_parquet(folder / "timeseries.parquet")
    assert series.attrs["units"]["nee_filled"] == "umol m-2 s-1"
    assert pd.read_parquet(folder / "daily.parquet").attrs["units"]["nee"] == "g m-2"
    with xr.open_dataset(nc) as dataset:
        assert dataset["nee"].attrs["units"] == "kg m-2 s-1"
        assert dataset["nee_daily_sum"].attrs["units"] == "g m-2"
        assert dataset["nee_daily_mean"].attrs["units"] == "kg m-2 s-1"
        np.testing.assert_allclose(dataset["nee"].values,
                                   series["nee_filled"].to_numpy(float) * 12.011e-9,
                                   rtol=1e-4)
        np.testing.assert_array_equal(dataset["nep"].values, -dataset["nee"].values)
        quality = dataset["nee_fill_quality"]
        assert {"flag_values", "flag_meanings"} <= set(quality.attrs)
        assert {"measured", "A", "B", "C", "unfilled"} <= set(
            quality.attrs["flag_meanings"].split())
    metadata = json.loads((csv_folder / "csv-metadata.json").read_text())
    columns = {column["name"]: column for table in metadata["tables"]
               if table["url"] == "timeseries.csv" for column in table["tableSchema"]["columns"]}
    assert columns["nee_filled"]["schema:unitText"] == "umol m-2 s-1"
    csv = pd.read_csv(csv_folder / "timeseries.csv", usecols=["nee_filled",
                                                              "nee_fill_quality"])
    np.testing.assert_allclose(csv["nee_filled"], series["nee_filled"], rtol=1e-12)
    assert set(csv["nee_fill_quality"].dropna()) <= {"measured", "A", "B", "C", "unfilled"}


def test_the_light_response_caption_defines_its_symbols(written_demo):
    """The report's light-response caption printed "β0 at its upper bound" without saying
    what β0 is; it now states the model's symbols with their units (Lasslop et al. 2010,
    eq. of the rectangular hyperbola with the VPD limit (m))."""
    from fluxpart import figures
    from fluxpart.report import read_written

    _, folder = written_demo
    drawing = figures.Drawing()
    with drawing.mpl.rc_context():
        caption = figures.figure_light_response(drawing, read_written(folder)).caption
    assert "GPP = α β Rg / (α Rg + β)" in caption
    assert "β the light-saturated uptake β0 [µmol m-2 s-1]" in caption
    assert "α the initial slope [µmol J-1]" in caption and "k [hPa-1]" in caption
    assert "Rref the respiration at 10 °C [µmol m-2 s-1]" in caption


def test_checks_clock_shift_has_no_negative_zero():
    """`check` printed "shift of Rg -0 min" for a shift of -0.4 min: a whole minute is
    rounded before its sign is written, and a shift that could not be judged stays NaN."""
    from types import SimpleNamespace

    from fluxpart.cli import _format_clock

    def verdict(shift):
        return SimpleNamespace(months_used=12, shift_minutes=shift, spread_minutes=5.0,
                               status="consistent", hemisphere="consistent", notes=[])

    assert "shift of Rg      +0 min (spread 5 min" in _format_clock(verdict(-0.4))
    assert "shift of Rg      -1 min" in _format_clock(verdict(-0.6))
    assert "shift of Rg      +29 min" in _format_clock(verdict(29.4))
    assert "shift of Rg      +nan min" in _format_clock(verdict(float("nan")))
