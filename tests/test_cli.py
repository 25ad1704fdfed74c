"""The command line: demo, run, check; errors as one line with exit status 2."""

import importlib.util
import json
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

from fluxpart.cli import main
from fluxpart.manifest import CAUTION

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture
def example(tmp_path):
    """A copy of the example site config and its CSV in a temporary folder."""
    for name in ("quillmoor_grassland.toml", "quillmoor_grassland.csv"):
        shutil.copy(EXAMPLES / name, tmp_path / name)
    return tmp_path / "quillmoor_grassland.toml"


def test_check_prints_the_coverage_table(example, capsys):
    """`fluxpart check` on the example prints a per-variable coverage table and exits 0.

    Two blank lines above the header (readernotes51; review64: listed under "problems
    found", exit 1, for a file read right): the reader's note is listed under a heading of
    its own and leaves exit 0, as the README's exit-status table says."""
    csv = example.with_suffix(".csv")
    csv.write_text("\n\n" + csv.read_text(encoding="utf-8"), encoding="utf-8")
    assert main(["check", str(example)]) == 0
    out = capsys.readouterr().out
    assert "coverage" in out and "longest gap" in out
    for name in ("nee", "rg", "tair", "vpd", "ustar"):
        assert f"\n{name} " in out
    # issue 5: the screening counts and the u* threshold estimate
    assert "spike" in out and "u* threshold" in out and "detected" in out
    assert "problems found: none" in out
    notes = out.split("notes (the file was read as it means) (1)\n", 1)[1].splitlines()
    assert notes[0].endswith("2 blank line(s) above the header (line 3) read past")
    # Behaviour check (review round eighteen): the u* table of `check` named seasons
    # ("winter") without their months, which differ between the hemispheres; each season
    # row now shows its months: at the northern example, meteorological winter is
    # December to February (common practice)
    table = out[out.index("u* threshold [m s-1]"):].splitlines()
    assert "months" in table[1].split()
    winter = [line.split() for line in table if " winter " in f" {line} "]
    assert winter and all(row[1:3] == ["winter", "DJF"] for row in winter)


def test_check_exits_1_on_a_reader_warning_alone(example, capsys):
    """readernotes51: a reader warning (a value dropped: the last line cut short, a logger
    stopped mid-write) is a problem and still gives exit 1, listed under "problems found"
    with no notes heading; only notes leave exit 0 (the test above)."""
    csv = example.with_suffix(".csv")
    # a record after the year's last, cut after its third field: dropping it loses no
    # interval of the budget year (the file's last record ends 2021 on its last stamp)
    csv.write_text(csv.read_text(encoding="utf-8") + "202201010030,-9999,0.9\n",
                   encoding="utf-8")
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    listed = out.split("problems found (1)\n", 1)[1].splitlines()
    assert "a record cut short" in listed[0] and listed[0].endswith("dropped")
    assert "notes (the file was read as it means)" not in out


def test_check_lists_a_u_star_floor_far_above_the_detected_threshold(example, capsys):
    """review52: `run` warns of a `ustar_min_threshold` far above the threshold the night
    records give (0.5 m s-1 on this grassland moved NEE by 4.0 sigma, round mistakes43), but
    `check` exited 0 without a word of it. It is now listed as a problem (exit 1), naming
    the setting; the example as written stays clean."""
    text = example.read_text(encoding="utf-8")
    example.write_text(text.replace("[processing]\n", "[processing]\nustar_min_threshold = 0.5\n"),
                       encoding="utf-8")
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    assert "u* threshold: " in out and "ustar_min_threshold = 0.5 m s-1" in out
    # the note names its stage once (review53: "u* threshold: u* threshold: ...")
    assert "u* threshold: u* threshold" not in out


def test_run_writes_the_result_folder(example, tmp_path, capsys):
    """`fluxpart run` writes every table and a manifest that records the input's SHA-256."""
    out_dir = tmp_path / "out"
    assert main(["run", str(example), "--out", str(out_dir)]) == 0
    printed = capsys.readouterr().out
    assert "Annual budget" in printed and CAUTION.split(".")[0] in printed.replace("\n", " ")
    # the period read heads the output, as demo's does, and the next step is named
    # (review54: a new user expected the report page `demo` draws)
    assert printed.splitlines()[0].endswith(", 2021-01-01 to 2021-12-31, 17520 records")
    assert f"Figures and report page: fluxpart report {out_dir}" in printed
    manifest = json.loads((out_dir / "manifest.json").read_text())
    assert len(manifest["provenance"]["input"]["sha256"]) == 64
    annual = pd.read_parquet(out_dir / "annual.parquet")
    assert {"nee", "gpp_nighttime", "gpp_daytime", "ustar_threshold"} <= set(annual.columns)
    # the header says what share_measured is ("share_measured of records" before review25),
    # and the printed share is that, counted with pandas on the written time series
    assert "share_measured: share of the records with measured NEE" in printed
    series = pd.read_parquet(out_dir / "timeseries.parquet")
    share = float((series["nee_fill_quality"].astype(str) == "measured").mean())
    row = next(line for line in printed.splitlines() if line.startswith("2021 "))
    assert f"{share:.2f}" == row.split()[6]


def test_bad_config_is_one_clear_error_line(example, capsys):
    """An unknown setting exits with status 2 and names the key and the nearest valid one."""
    text = example.read_text() + "\nustar_treshold = 0.2\n"
    example.write_text(text.replace("[processing]", "[processing]", 1))
    status = main(["run", str(example)])
    err = capsys.readouterr().err
    assert status == 2
    assert "ustar_treshold" in err and "ustar_threshold" in err
    assert "Traceback" not in err


def test_missing_config_file_is_named(tmp_path, capsys):
    """A config path that does not exist is named in the error."""
    assert main(["check", str(tmp_path / "nowhere.toml")]) == 2
    assert "nowhere.toml" in capsys.readouterr().err


def test_module_entry_point_runs():
    """`python -m fluxpart --help` works (the module entry point)."""
    completed = subprocess.run([sys.executable, "-m", "fluxpart", "--help"],
                               capture_output=True, text=True, check=False)
    assert completed.returncode == 0
    assert "demo" in completed.stdout and "check" in completed.stdout


def test_unit_mixup_listed_by_check_and_refused_by_run(example, tmp_path, capsys):
    """Issue 12: VPD in kPa declared as hPa (1 kPa = 10 hPa) is a problem for `check`
    (exit 1, naming the fix) and `run` refuses it with exit 2 before writing anything."""
    example.write_text(example.read_text().replace('vpd = "kPa"', 'vpd = "hPa"'))
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    assert 'vpd = "kPa"' in out and "(run stops)" in out
    assert "unit mix-up named above" not in out        # the refusal is the only problem
    assert main(["run", str(example), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: column 'vpd_kpa'") and 'vpd = "kPa"' in err
    assert not (tmp_path / "out").exists()


def test_check_says_the_problems_after_a_unit_mix_up_may_follow_from_it(example, capsys):
    """Air temperature in °C declared as K reads as about -265 °C (0 °C = 273.15 K, SI):
    `check` named the unit, then E0, Rref and the u* threshold as problems of their own
    (no night records spanning 5 K: "set [processing] e0_fallback"), which all follow
    from the unit. A note now says so after the list (review49); a refusal listed alone
    has none (test_unit_mixup_listed_by_check_and_refused_by_run)."""
    example.write_text(example.read_text().replace('vpd = "kPa"', 'vpd = "kPa"\ntair = "K"'))
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    listed = out.split("problems found (", 1)[1].split("\n\n", 1)[0].splitlines()
    assert 'tair = "°C"' in listed[1] and "(run stops)" in listed[1]
    assert any("e0_fallback" in line for line in listed)
    assert listed[-1] == ("  note: the run stops at the unit mix-up named above; the other "
                          "problems were judged on the values as read in that unit and may "
                          "follow from it alone: set the unit and run check again")


def test_check_names_a_wrong_utc_offset_and_run_refuses_it(example, tmp_path, capsys):
    """Issue 12: a clock an hour off is a problem for `check` (exit 1, naming
    utc_offset = 1) and `run` refuses it with exit 2 before writing anything."""
    # the example's stamps are UTC+1 (fluxpart.demo); declared UTC+0, Rg comes 60 min
    # late against the sun (Earth turns 15° per hour; sun from fluxpart.solar, itself
    # checked against pvlib's SPA in test_solar.py)
    example.write_text(example.read_text().replace("utc_offset = 1.0", "utc_offset = 0.0"))
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    assert "clock:" in out and "utc_offset = 1" in out and "(run stops)" in out
    assert main(["run", str(example), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: clock:") and "utc_offset = 1" in err
    assert 'clock_check = "warn"' in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_degenerate_record_check_exits_1_run_exits_2(example, tmp_path, capsys):
    """One day of data: `check` names the E0 stage (exit 1); `run` stops before fitting
    with the same cause (exit 2). Lloyd–Taylor E0 needs 15-day windows of night NEE over
    5 K (Reichstein et al. 2005)."""
    csv = example.with_suffix(".csv")
    lines = csv.read_text().splitlines()
    csv.write_text("\n".join(lines[:49]) + "\n")
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    assert "nighttime partitioning (E0)" in out and "less than a year" in out
    assert main(["run", str(example), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "nighttime partitioning (E0)" in err and "Traceback" not in err


@pytest.mark.parametrize("place", ["existing_file", "below_a_file"])
def test_out_that_cannot_be_written_fails_before_computing(example, tmp_path, capsys, place):
    """`--out` naming an existing file, or a folder below a file: exit 2 at once, naming
    --out, with nothing computed (no output on stdout)."""
    blocker = tmp_path / "taken.txt"
    blocker.write_text("not a folder")
    out = blocker if place == "existing_file" else blocker / "sub" / "out"
    assert main(["run", str(example), "--out", str(out), "--quiet"]) == 2
    captured = capsys.readouterr()
    assert captured.err.startswith("error: --out") and "Traceback" not in captured.err
    assert captured.out == ""
    assert blocker.read_text() == "not a folder"


def test_collector_thresholds_raised_during_a_command_and_restored(example, monkeypatch):
    """Issue 17: a command runs with the raised garbage-collector thresholds, and main
    leaves the interpreter's own thresholds as it found them, also after an error."""
    import gc

    from fluxpart import cli

    seen = []

    def stop(out, *site_name):
        seen.append(gc.get_threshold())
        raise cli.FluxpartError("stopped by the test")

    monkeypatch.setattr(cli, "_check_output_folder", stop)
    before = gc.get_threshold()
    assert main(["run", str(example), "--quiet"]) == 2
    assert seen == [cli._GC_THRESHOLDS] and cli._GC_THRESHOLDS != before
    assert gc.get_threshold() == before


def test_command_modules_imported_without_collector_passes(tmp_path, monkeypatch):
    """Issue 17 (round speed48): a command's modules are imported with the garbage
    collector paused and what they leave is frozen, so no pass scans it; a module that
    cannot be imported is left to the command; only the process's own command does it."""
    import gc

    from fluxpart import cli

    # a module of its own, so that the import happens here: 20,000 lasting containers
    (tmp_path / "speed48_lasting.py").write_text("KEPT = [[i] for i in range(20_000)]\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    passes = []

    def note(phase, info):
        if phase == "start":
            passes.append(info["generation"])

    thresholds, frozen = gc.get_threshold(), gc.get_freeze_count()
    gc.set_threshold(100)               # a pass every 100 new containers, were it enabled
    gc.callbacks.append(note)
    try:
        cli._import_uncollected(["speed48_lasting", "fluxpart.no_such_module"])
        assert passes == [] and gc.isenabled()
        assert gc.get_freeze_count() >= frozen + 20_000
        assert len(sys.modules["speed48_lasting"].KEPT) == 20_000
    finally:
        gc.callbacks.remove(note)
        gc.set_threshold(*thresholds)
        gc.unfreeze()
        sys.modules.pop("speed48_lasting", None)
    assert all(importlib.util.find_spec(name) is not None
               for names in cli._COMMAND_MODULES.values() for name in names)
    # the process's own command (no argv) imports its modules so; a caller's main(argv)
    # freezes nothing of the caller's
    called = []
    monkeypatch.setattr(cli, "_import_uncollected", called.append)
    monkeypatch.setattr(sys, "argv", ["fluxpart", "run", str(tmp_path / "absent.toml"),
                                      "--quiet"])
    try:
        assert main() == 2
    finally:
        gc.unfreeze()                   # main() froze the process's objects at its end
    assert main(sys.argv[1:]) == 2
    assert called == [cli._COMMAND_MODULES["run"]]


def _thinned_nights(tmp_path, keep):
    """The invented demo year as a tower file, keeping a share `keep` of its night NEE."""
    import numpy as np

    from fluxpart import demo

    config = demo.write_example(tmp_path, seed=1)
    path = config.with_suffix(".csv")
    table = pd.read_csv(path, dtype=str)
    dark = ~(table["solar_down"].astype(float).to_numpy() > 20.0)
    drop = dark & (np.random.default_rng(3).random(len(table)) >= keep)
    table.loc[drop, "co2_exchange"] = "-9999"
    table.to_csv(path, index=False)
    return config


def test_check_does_not_list_a_u_star_year_its_table_shows_detected(tmp_path, capsys):
    """Behaviour check of check against its own u* table (review19): with a quarter of the
    demo year's night NEE, every season holds under the 6 x 20 x 3 = 360 records the
    preflight counts, yet the moving point test, merging temperature classes where it
    cannot resolve them (down to one class of 20 x 3 = 60), gives the year its threshold;
    check listed "no season has the 360 night records ... would be used" beside a table
    showing it detected. With 6 % kept no season gives one and the finding stays."""
    assert main(["check", str(_thinned_nights(tmp_path / "quarter", 0.25))]) == 0
    out = capsys.readouterr().out
    assert "problems found: none" in out
    assert " 2021   year " in out and "detected" in out.split("u* threshold [m s-1]")[1]
    assert main(["check", str(_thinned_nights(tmp_path / "sparse", 0.06))]) == 1
    out = capsys.readouterr().out
    assert "u* threshold: 2021: no season has the 360 night records" in out
    assert "pooled_year" in out.split("u* threshold [m s-1]")[1]


def _readme_command_block() -> str:
    """The fenced block under README's "## Command line" heading."""
    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    section = text.split("\n## Command line\n", 1)[1]
    return section.split("```", 2)[1]


def test_readme_command_block_lists_every_option_of_every_command():
    # docs against the code: the options argparse (the standard library) actually defines for
    # each command must be in that command's README entry (review22: demo --seed and --quiet,
    # batch --out and --quiet, run and report --quiet were missing)
    import argparse

    from fluxpart.cli import _parser

    block = _readme_command_block()
    entries = {}
    for line in block.splitlines():
        if line.startswith("fluxpart "):
            current = line.split()[1]
            entries[current] = line
        elif line.startswith(" ") and entries:
            entries[current] += line
    commands = next(a for a in _parser()._actions if isinstance(a, argparse._SubParsersAction))
    assert set(commands.choices) <= set(entries), set(commands.choices) - set(entries)
    for name, sub in commands.choices.items():
        options = {o for action in sub._actions for o in action.option_strings
                   if o.startswith("--") and o != "--help"}
        missing = {o for o in options if o not in entries[name]}
        assert not missing, (name, missing)


def test_report_quiet_help_promises_only_what_report_prints():
    """`report --quiet` said the tables and warnings are still printed; report prints the
    page's path and the caution alone (review58; `command_report`'s two print lines)."""
    import argparse

    from fluxpart.cli import _parser

    commands = next(a for a in _parser()._actions if isinstance(a, argparse._SubParsersAction))
    quiet = {name: next(a.help for a in sub._actions if "--quiet" in a.option_strings)
             for name, sub in commands.choices.items() if name in ("run", "report")}
    assert "tables" in quiet["run"] and "tables" not in quiet["report"]
    assert "the path written and the caution" in quiet["report"]


@pytest.mark.parametrize("command", ["demo", "run", "check", "verify", "diff", "report",
                                     "batch", "export"])
def test_every_command_help_states_its_exit_statuses(command, capsys, monkeypatch):
    # a user of `fluxpart COMMAND --help` learns what the exit status means (review22:
    # only verify and diff said so; check's 1 for problems was in the README alone)
    # wide lines: argparse wraps at hyphens, and at 80 columns diff's "floating-point"
    # came out "floating- point", failing this test in a terminal of that width (review64)
    monkeypatch.setenv("COLUMNS", "1000")
    with pytest.raises(SystemExit) as stop:
        main([command, "--help"])
    assert stop.value.code == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "Exit 0" in text and "2: " in text
    if command in ("check", "batch", "verify", "diff"):
        assert "1: " in text
    assert "half-hourly" not in text  # records may be hourly; export writes the record interval
    if command == "diff":
        # folders equal within rounding exit 0 since leftovers50; the help still said
        # "Exit 0: same; 1: they differ" (review59)
        assert "equal within floating-point rounding" in text
        # platform facts are facts of the run: no exit 1 by themselves (leftovers51)
        assert "whatever platform facts" in text
        # so are library versions and the code fingerprint, as verify lists them (leftovers52)
        assert "whatever platform facts, versions or code" in text
        # and the inputs' bytes and the reader's notes: the tables are the verdict (leftovers55)
        assert "input hashes or reader's notes differ" in text


def test_netcdf_export_docs_do_not_promise_half_hourly_records():
    # a site of hourly records (README: "records of 30 or 60 minutes") is exported at its own
    # interval (global attribute interval_minutes); the docstrings said "half-hourly" (review22)
    from fluxpart.export import to_xarray
    from fluxpart.result import Result

    for doc in (Result.to_xarray.__doc__, to_xarray.__doc__):
        assert "half-hourly" not in doc and "30 or 60 min" in doc


def test_check_names_an_event_outside_the_record(example, capsys):
    """An event of a mistyped year (the example holds 2021) cuts no gap filling; `run`
    warned about it, `check` (which lists every problem before a run) did not and
    exited 0 (review23). Now it is listed and check exits 1; an event within the record
    is no problem."""
    text = example.read_text()
    example.write_text(text + 'events = ["2012-07-20"]\n')
    assert main(["check", str(example)]) == 1
    out = capsys.readouterr().out
    assert "gap filling: events: 2012-07-20 lies outside the record" in out
    example.write_text(text + 'events = ["2021-07-20"]\n')
    assert main(["check", str(example)]) == 0
    assert "events:" not in capsys.readouterr().out


def test_check_says_what_follows_from_a_wrong_latitude_or_missing_code(example, capsys):
    """A latitude of the wrong sign moves the sun every record is judged against: `check`
    listed, beside the geometry refusal, Rg above the potential radiation and a night mask
    whose advice was a night_rg_threshold of hundreds of W m-2. A note now says those may
    follow from the refusal; a missing code read as a value (-9999 left out of
    [input] missing) names [input] missing as the fix, not the unit (newuser54). The
    geometry fact: in the southern hemisphere the potential radiation peaks in December,
    in the northern in June (solar declination, Spencer 1971 (m)); the example's Rg
    follows the north."""
    text = example.read_text()
    example.write_text(text.replace("latitude = 49.3", "latitude = -49.3"))
    assert main(["check", str(example)]) == 1
    listed = capsys.readouterr().out.split("problems found (", 1)[1].split("\n\n", 1)[0]
    assert "latitude = 49.3 (run stops)" in listed and "potential radiation" in listed
    assert listed.splitlines()[-1].startswith(
        "  note: the run stops at the clock or site geometry named above; the other problems "
        "were judged against the sun as [site] places it")
    example.write_text(text.replace("missing = [-9999]", "missing = [-7777]"))
    assert main(["check", str(example)]) == 1
    listed = capsys.readouterr().out.split("problems found (", 1)[1].split("\n\n", 1)[0]
    assert "the value -9999 alone occurs" in listed and "(run stops)" in listed
    assert listed.splitlines()[-1] == (
        "  note: the run stops at the missing code named above; the other problems were "
        "judged with that code read as a value and may follow from it alone: add it to "
        "[input] missing and run check again")
