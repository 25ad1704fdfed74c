"""Three new users (a modeller, an auditor, a tower scientist) and what they met (round newuser57).

Each test is one point where a newcomer was stuck or misled, checked as the user meets it:
the message a command prints, or a README block run as written. The outside sources are
named beside each check: Python's ``zoneinfo`` (the IANA tz database) for the offsets of
time zones, ISO 8601 for stamps and offsets, ``cf_units`` (UDUNITS-2) for units.
"""
import json
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _paragraph(start: str) -> str:
    """The README's text from `start` to the next heading, bold-led paragraph or numbered
    step (a "#" line inside a fenced block is a comment, not a heading)."""
    text = README[README.index(start):]
    ends = [text.find(mark, 1) for mark in ("\n## ", "\n### ", "\n\n**", "\n\n1. ")]
    return text[:min(end for end in ends if end > 0)]


# --- the tower scientist ---------------------------------------------------------------

def _logger_file(folder: Path, days: int = 3) -> Path:
    """An invented logger file: a title line, the header, a units line and a statistics
    line, stamps written to the second at interval ends."""
    stamps = pd.date_range("2021-06-01 00:30", periods=days * 48, freq="30min")
    lines = ['"Brackenholt Moss fen tower (fictional)","table flux30"',
             '"stamp","co2_net","sw_in","t_air","vpd","ustar"',
             '"local","umol/m2/s","W/m2","degC","hPa","m/s"',
             '"","avg","avg","avg","avg","avg"']
    lines += [f'"{t:%Y-%m-%d %H:%M:%S}",-2.0,300.0,15.0,8.0,0.3' for t in stamps]
    (folder / "flux30.dat").write_text("\n".join(lines) + "\n", encoding="utf-8")
    config = folder / "fen.toml"
    config.write_text(
        '[site]\nname = "Brackenholt Moss"\nlatitude = 49.31\nlongitude = 10.18\n'
        'utc_offset = 1.0\n\n[input]\npath = "flux30.dat"\ntime_column = "stamp"\n'
        'time_format = "%Y%m%d%H%M"\ntime_marks = "end"\nmissing = [-9999]\n'
        'rows_before_header = 1\nrows_after_header = 2\n\n[input.columns]\nnee = "co2_net"\n'
        'rg = "sw_in"\ntair = "t_air"\nvpd = "vpd"\nustar = "ustar"\n', encoding="utf-8")
    return config


def test_a_stamp_that_fails_its_format_is_quoted_as_the_file_writes_it(tmp_path, capsys):
    """The README's config format ("%Y%m%d%H%M") left in place over stamps written to the
    second: the error quoted '2021-06-01 00:30' where the file holds '2021-06-01 00:30:00'
    and named "%Y-%m-%d %H:%M" as the format every stamp reads as, so the newcomer,
    grepping the file, found neither. It quotes the stamp as written now, and names the
    format of the file's own text (ISO 8601-1:2019, 5.3.1.4: 13:30:00 names the same
    minute as 13:30 (m), so both formats read it; the one that matches the text is named)."""
    config = _logger_file(tmp_path)
    assert main(["check", str(config)]) == 2
    error = capsys.readouterr().err
    assert error.count("\n") == 1 and error.startswith("error: ")
    assert "flux30.dat' has stamp '2021-06-01 00:30:00', which does not match" in error
    assert "line 5 of " in error
    assert 'every stamp reads as time_format = "%Y-%m-%d %H:%M:%S"' in error
    # the format named reads the file
    config.write_text(config.read_text().replace('"%Y%m%d%H%M"', '"%Y-%m-%d %H:%M:%S"'))
    assert main(["check", str(config)]) in (0, 1)
    assert "period            2021-06-01 00:00" in capsys.readouterr().out


def test_the_reflected_short_wave_mapped_as_rg_is_named_among_the_causes():
    """The outgoing (reflected) channel of a four-component radiometer mapped as rg, a
    column beside the incoming one in every such file: refused as "PAR in W m-2 or a
    shaded or soiled sensor", neither of which the newcomer had. A grass surface reflects
    about 0.2 to 0.26 of the incoming short-wave (albedo; Oke 1987, Boundary Layer
    Climates, table 1.1 (m)): the refusal names the reflected radiation now."""
    from fluxpart import demo
    from fluxpart.solar import potential_radiation
    from fluxpart.unit_checks import mixup_messages

    frame, _ = demo.site_year(seed=0)
    site = demo.SITE
    potential = potential_radiation(frame.index, site.latitude, site.longitude,
                                    site.utc_offset, interval_minutes=30)
    names = ("nee", "rg", "tair", "vpd")
    converted = {n: frame[n].to_numpy(float) for n in names}
    columns = {**{n: n for n in names}, "rg": "sw_out"}
    refusals, _ = mixup_messages(converted, {}, columns, 30, potential)
    assert "rg" not in refusals
    reflected = {**converted, "rg": np.clip(converted["rg"], 0.0, None) * 0.22}
    refusals, _ = mixup_messages(reflected, {}, columns, 30, potential)
    message = refusals.get("rg", "")
    assert message.startswith("column 'sw_out' (rg)"), refusals
    assert "the reflected (outgoing) short-wave radiation" in message
    assert "map global (incoming short-wave) radiation as rg" in message


@pytest.mark.parametrize("written, meant", [
    ("+01:00", 1.0), ("UTC+1", 1.0), ("-03:30", -3.5), ("+05:30", 5.5), ("GMT-5", -5.0), ("5.75", 5.75),
])
def test_a_utc_offset_written_as_a_clock_shows_it_names_the_number(written, meant):
    """`utc_offset = "+01:00"` was refused as "not a number", with no number offered; the
    error now names the hours the text means (ISO 8601-1:2019: ±hh:mm (m))."""
    from fluxpart import Site
    from fluxpart.errors import ConfigError

    with pytest.raises(ConfigError) as raised:
        Site("Brackenholt Moss", 49.31, 10.18, utc_offset=written)
    message = str(raised.value)
    assert f"[site] utc_offset = \"{written}\" is not a number" in message
    number = re.search(r"write it as hours: utc_offset = (-?[\d.]+)$", message)
    assert number and float(number.group(1)) == meant
    assert Site("Brackenholt Moss", 49.31, 10.18, utc_offset=float(number.group(1)))


@pytest.mark.parametrize("zone", ["Europe/Berlin", "Asia/Kolkata", "America/St_Johns",
                                  "Australia/Sydney", "America/Chicago"])
def test_a_time_zone_name_as_utc_offset_names_its_standard_offset(zone):
    """`utc_offset = "Europe/Berlin"`: the error names the zone's standard offset, taken
    here independently from the IANA tz database through Python's zoneinfo (the offset
    of a day without daylight saving, in January or July: Sydney's standard time is its
    July), and, for a zone with summer time, the [input] time_zone setting that reads
    stamps in civil time."""
    import datetime
    import zoneinfo

    from fluxpart import Site
    from fluxpart.errors import ConfigError

    with pytest.raises(ConfigError) as raised:
        Site("Brackenholt Moss", 49.31, 10.18, utc_offset=zone)
    message = str(raised.value)
    info = zoneinfo.ZoneInfo(zone)
    moments = [datetime.datetime(2026, month, 1, tzinfo=info) for month in (1, 7)]
    standard = min(m.utcoffset() - m.dst() for m in moments).total_seconds() / 3600
    stated = re.search(r"is a time zone, whose standard time is UTC[+-][\d.]+ h: "
                       r"utc_offset = (-?[\d.]+)", message)
    assert stated and float(stated.group(1)) == standard, message
    summer = any(m.dst() for m in moments)
    assert (f'[input] time_zone = "{zone}"' in message) == summer


def test_a_clock_text_of_no_zones_offset_is_not_offered_as_the_fix():
    """"-05:30" reads as -5.5 h, which no zone uses (the IANA tz database's standard
    offsets, `site.FRACTIONAL_UTC_OFFSETS` (m)): offering `utc_offset = -5.5` led to the
    next refusal, so the hint says it is no zone's offset instead."""
    from fluxpart import Site
    from fluxpart.errors import ConfigError

    with pytest.raises(ConfigError) as raised:
        Site("Brackenholt Moss", 49.31, 10.18, utc_offset="-05:30")
    message = str(raised.value)
    assert message.endswith("it reads as -5.5 h, which no time zone uses as its standard time")
    assert "utc_offset = -5.5" not in message


def test_text_that_names_no_offset_gets_no_guess():
    from fluxpart import Site
    from fluxpart.errors import ConfigError

    for text in ("one", "CET", "Mars/Olympus"):
        with pytest.raises(ConfigError) as raised:
            Site("Brackenholt Moss", 49.31, 10.18, utc_offset=text)
        assert str(raised.value).endswith("written without quotes"), str(raised.value)


# --- the modeller -------------------------------------------------------------------

def test_export_names_that_say_another_format_are_refused_before_writing(written_demo,
                                                                          tmp_path, capsys):
    """`--netcdf site.csv` (a spreadsheet user after one CSV file) wrote a binary NetCDF
    file named site.csv without a word; `--csv gpp.csv` made a folder named gpp.csv. Both
    are refused now, one error line each, naming the option and what to give; nothing is
    written."""
    _, folder = written_demo
    assert main(["export", str(folder), "--netcdf", str(tmp_path / "site.csv")]) == 2
    error = capsys.readouterr().err
    assert error.startswith("error: --netcdf ") and error.count("\n") == 1
    assert "name it .nc" in error and "--csv FOLDER" in error
    assert main(["export", str(folder), "--csv", str(tmp_path / "gpp.csv")]) == 2
    error = capsys.readouterr().err
    assert error.startswith("error: --csv ") and "_csv'" in error and error.count("\n") == 1
    assert list(tmp_path.iterdir()) == []
    # the README says so where it describes the export
    csv_text = _paragraph("**CSV for R and spreadsheets.**")
    assert "a new name ending in `.csv` is refused" in csv_text
    assert "named as another format" in csv_text


def test_every_exported_stamp_fits_the_readmes_spreadsheet_formula(written_demo, tmp_path):
    """The README's spreadsheet formula takes the date from characters 1-10 and the clock
    from characters 12-19 of each stamp: every time column of every CSV table must be
    ISO 8601's YYYY-MM-DDTHH:MM:SS followed by the site's one offset (ISO 8601-1:2019,
    4.3.13 (m)), and the local clock so read must be the Parquet table's stamp."""
    _, folder = written_demo
    assert main(["export", str(folder), "--csv", str(tmp_path / "site_csv")]) == 0
    formula = "=DATEVALUE(LEFT(A2,10))+TIMEVALUE(MID(A2,12,8))"
    assert formula in _paragraph("**CSV for R and spreadsheets.**")
    meta = json.loads((tmp_path / "site_csv" / "csv-metadata.json").read_text())
    offset = None
    for table in meta["tables"]:
        first = table["tableSchema"]["columns"][0]["name"]
        if first not in ("time", "date", "month"):
            continue
        stamps = pd.read_csv(tmp_path / "site_csv" / table["url"], usecols=[0],
                             dtype=str).iloc[:, 0]
        shape = stamps.str.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d[+-]\d\d:\d\d")
        assert shape.all(), (table["url"], stamps[~shape].head())
        offsets = set(stamps.str[19:])
        assert len(offsets) == 1 and (offset is None or offsets == {offset})
        offset = offsets.pop()
        local = pd.to_datetime(stamps.str[:10] + " " + stamps.str[11:19])
        stored = pd.read_parquet(folder / table["url"].replace(".csv", ".parquet"))[first]
        assert (local.to_numpy() == pd.to_datetime(stored).to_numpy()).all()
    assert offset == "+01:00"                              # the demo site's UTC+1


# --- the auditor --------------------------------------------------------------------

def _trail_table() -> list:
    text = _paragraph("**Where the trail is.**")
    rows = [line for line in text.splitlines() if line.startswith("| `")]
    assert len(rows) >= 10
    return [row.split("|")[1].strip() for row in rows]


def test_every_place_the_readmes_trail_table_names_is_in_a_written_folder(bundle):
    """The auditor's map of the trail: each manifest key the README's table names is in
    the manifest `run` wrote, and each file it names is in the folder."""
    folder = bundle / "out"
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    for place in _trail_table():
        names = re.findall(r"`([^`]+)`", place)
        if place.startswith("`manifest.json`"):
            for name in names[1:]:
                value = manifest
                for part in name.split("."):
                    assert part in value, (name, list(value))
                    value = value[part]
        else:
            for name in names:
                assert (folder / name).is_file(), name
    site_config = manifest["provenance"]["site_config"]
    assert site_config["text"] == (bundle / "site.toml").read_text(encoding="utf-8")
    assert "not_quantified" in manifest["provenance"]["uncertainty"]


def test_the_readmes_rerun_for_diff_works_as_written(copy, capsys, monkeypatch):
    """The README's block for an auditor's own rerun: the site config rebuilt from the
    manifest's copy of its text, its input path pointed at the auditor's copy, `run` and
    `diff` as written; diff exits 0 (the same result) and names the config's bytes as the
    one fact of the run that differs."""
    received = copy / "received"
    shutil.move(copy / "out", received)
    (copy / "tower.csv").rename(copy / "tower-copy.csv")
    block = _paragraph("**A rerun of your own, for `diff`.**").split("```sh\n", 1)[1]
    commands = [line for line in block.split("```", 1)[0].splitlines()
                if line.strip() and not line.startswith("#")]
    extract, run, diff = commands
    # the block writes rerun.toml itself, as UTF-8 (round leftovers61: a redirected print
    # took the platform's encoding)
    assert extract.startswith('python -c "') and "'rerun.toml'" in extract
    program = shlex.split(extract)[2]
    subprocess.run([sys.executable, "-c", program], cwd=copy, check=True,
                   capture_output=True, text=True)
    text = (copy / "rerun.toml").read_text(encoding="utf-8")
    text = re.sub(r'(?m)^path = .*$', 'path = "tower-copy.csv"', text)
    (copy / "rerun.toml").write_text(text, encoding="utf-8")
    monkeypatch.chdir(copy)
    assert main(shlex.split(run)[1:]) == 0
    capsys.readouterr()
    assert main(shlex.split(diff.split("#", 1)[0])[1:]) == 0
    out = capsys.readouterr().out
    assert "same result" in out and "only the site config's bytes differ" in out


def test_the_glance_tables_driver_units_hold_in_parquet_csv_and_netcdf(written_demo, tmp_path):
    """The modeller compared the Parquet `vpd_filled` with the NetCDF `vpd` and found them
    100 times apart: the NetCDF writes VPD in Pa (the canonical unit of the CF standard
    name water_vapor_saturation_deficit_in_air (m)), the Parquet tables in hPa, and the
    README's table at a glance did not say so. Its drivers row is checked against the
    three formats, the values converted with UDUNITS-2 (cf_units) from each file's own
    unit attribute."""
    cf_units = pytest.importorskip("cf_units")
    xr = pytest.importorskip("xarray")

    glance = README[README.index("## For modellers"):README.index("The examples read a result")]
    row = next(line for line in glance.splitlines() if line.startswith("| drivers"))
    parquet_cell, netcdf_cell, csv_cell = [c.strip() for c in row.split("|")[2:5]]
    _, folder = written_demo
    series = pd.read_parquet(folder / "timeseries.parquet")
    units = series.attrs["units"]
    stated = {"rg_filled": "W m-2", "tair_filled": "°C (`degC`)", "tsoil_filled": "°C (`degC`)",
              "vpd_filled": "**hPa**", "ustar": "m s-1"}
    for column, unit in stated.items():
        assert re.search(rf"`{column}`[^|]*?{re.escape(unit)}", parquet_cell), column
        assert cf_units.Unit(units[column]) == cf_units.Unit(
            unit.split("`")[1] if "`" in unit else unit.strip("*"))
    assert "`vpd` in **Pa**" in netcdf_cell and csv_cell == "as Parquet"
    assert main(["export", str(folder), "--netcdf", str(tmp_path / "site.nc"),
                 "--csv", str(tmp_path / "csv")]) == 0
    with xr.open_dataset(tmp_path / "site.nc") as dataset:
        assert dataset["vpd"].attrs["units"] == "Pa"
        assert dataset["vpd"].attrs["standard_name"] == "water_vapor_saturation_deficit_in_air"
        for name in ("rg", "tair", "tsoil", "vpd"):
            column = f"{name}_filled"
            converted = cf_units.Unit(units[column]).convert(
                series[column].to_numpy(float), cf_units.Unit(dataset[name].attrs["units"]))
            np.testing.assert_allclose(dataset[name].values, converted, rtol=1e-6)
    metadata = json.loads((tmp_path / "csv" / "csv-metadata.json").read_text())
    csv_units = {c["name"]: c.get("schema:unitText") for t in metadata["tables"]
                 if t["url"] == "timeseries.csv" for c in t["tableSchema"]["columns"]}
    assert {c: csv_units[c] for c in stated} == {c: units[c] for c in stated}


def test_the_u_star_figures_count_axis_is_labelled_in_whole_draws(written_demo):
    """The report's bootstrap histogram labelled its axis "Bootstrap draws [count]" at 2.5,
    7.5, ...: half a draw. Its tick labels are whole numbers now (the ticks as the
    drawing places them, each axis' plan just before the figure is drawn)."""
    from fluxpart import figures
    from fluxpart.report import read_written

    _, folder = written_demo
    drawing = figures.Drawing()
    plans = []
    plan = drawing._tick_plan
    drawing._tick_plan = lambda axis: (plans.append((axis, plan(axis))), plans[-1][1])[1]
    written = read_written(folder)
    # the default 100 draws, ten at each of ten thresholds: the tallest bar holds 10
    # draws, as on the page that showed 2.5 and 7.5 (the shared result's 20 draws give
    # bars too low for a half step)
    draws = written.tables["parameters_ustar_bootstrap"]
    year = int(draws["year"].iloc[0])
    written.tables["parameters_ustar_bootstrap"] = pd.DataFrame({
        "row": range(100), "draw": range(100), "year": year, "period": "year",
        "threshold": np.repeat(np.linspace(0.15, 0.19, 10), 10)})
    with drawing.mpl.rc_context():
        figures.figure_ustar(drawing, written)
    counts = [(axis, found) for axis, found in plans
              if axis.get_label_text() == "Bootstrap draws [count]"]
    assert len(counts) == 1
    axis, (locations, labels, _) = counts[0]
    low, high = sorted(axis.get_view_interval())
    shown = [label for where, label in zip(locations, labels, strict=True) if low <= where <= high]
    assert len(shown) >= 2 and all(re.fullmatch(r"\d+", label) for label in shown), shown


def test_a_record_number_mapped_as_the_flag_is_named_so(tmp_path, capsys):
    """The newcomer mapped the logger's record number ("rec", 0, 1, 2, ...) as nee_flag:
    the refusal listed "the flags hold ['0', '1', ..., '9']" as if the column held ten
    codes. It names the count of values and the counter now (common practice: a logger
    numbers its records beside the stamp)."""
    from fluxpart.flag_counter import many_values_text

    config = _logger_file(tmp_path)
    text = config.read_text().replace('"%Y%m%d%H%M"', '"%Y-%m-%d %H:%M:%S"')
    table = (tmp_path / "flux30.dat").read_text().splitlines()
    table[1] = table[1].replace('"stamp",', '"stamp","rec",')
    table[2:4] = [line.replace('"local",', '"local","n",').replace('"",', '"","",', 1)
                  for line in table[2:4]]
    records = table[4:]
    config.write_text(text + 'nee_flag = "rec"\n')
    # counted from 1 every record is rejected; from 0 all but the first (another message)
    for first, opening in ((1, "error: nee_flag: every record"),
                           (0, "error: nee_flag: 143 of 144 records")):
        table[4:] = [line.replace(",", f",{first + number},", 1)
                     for number, line in enumerate(records)]
        (tmp_path / "flux30.dat").write_text("\n".join(table) + "\n")
        assert main(["check", str(config)]) == 2
        error = capsys.readouterr().err
        assert error.startswith(opening) and error.count("\n") == 1, error
        assert ("144 different values, growing from record to record: a record number, "
                "not a quality flag") in error
    # a quality flag of a few classes gets no such clause, nor many values that do not grow
    flags = np.tile([0.0, 1.0, 2.0], 48)
    assert many_values_text([flags]) == ""
    noise = np.random.default_rng(1).permutation(144).astype(float)
    assert many_values_text([noise]) == "144 different values"
