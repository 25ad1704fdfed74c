"""Probe: a station's files over years and the files a network hands to ``fluxpart batch``.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts39.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). Round layouts39; the helpers (our own column names, the site TOML, the
judging of one file's reading and of ``check`` and ``run``) are those of
``probe_layouts38.py``.

Each case splits the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site; a second year is the same records a year later) into the files a station
writes over time: daily and monthly files, a logger swapped mid-year, a meteorological
logger's file beside the flux logger's, overlaps, cut and NUL-filled ends, a stray file that
matches the glob, civil time, leap days, an interval that changes. Its truth is the example's
frame (records a case leaves out missing) or the reading of the same records written as one
plain file (``canonical``). For the network cases it runs ``fluxpart batch``.

Then ``fluxpart check`` and ``fluxpart run`` in a fresh process (``probe_layouts38``'s
``commands_agree``: a refusal is one ``error:`` line; a case whose truth is the example's
frame must give the example run's ``timeseries`` and ``annual`` values). One line a case:
``right``, ``refused`` (one ``error:`` line), ``WRONG`` (read, but a stamp or value differs,
or the run's table) or ``CRASH``; the last line counts each class.
"""
import os
import shutil
import sys
import traceback
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts39-")))]
import probe_layouts38 as p38  # noqa: E402
from probe_layouts38 import command, lines, table, toml, truth, write  # noqa: E402

from fluxpart.io import read_site_config  # noqa: E402

CASES = {}
W = p38.W


def case(function):
    CASES[function.__name__] = function
    return function


def month_of(ends):
    return (ends - pd.Timedelta("30min")).dt.month.to_numpy()


def day_of(ends):
    return (ends - pd.Timedelta("30min")).dt.strftime("%Y%m%d").to_numpy()


def parts(folder, raw, keys, pattern="q_{}.csv", header=True):
    """One file a value of `keys` (a per-record array), named by `pattern`."""
    for key in pd.unique(keys):
        write(folder / pattern.format(key), lines(raw[keys == key], header=header))


def monthly(folder, pattern="q_{:02d}.csv"):
    """The example as month files; returns its records and each one's month."""
    raw, ends = table()
    month = month_of(ends)
    parts(folder, raw, month, pattern)
    return raw, month


def canonical(folder, raw, **inputs):
    """The same records as one plain file, read as the truth; returns its folder."""
    home = folder / "_canonical"
    home.mkdir()
    write(home / "t.csv", lines(raw))
    toml(home, "t.csv", **inputs)
    return home


def two_years():
    """The example year and the same records a year later (2021-2022)."""
    raw, ends = table()
    later = raw.copy()
    later_ends = ends + pd.DateOffset(years=1)
    later["stamp"] = later_ends.dt.strftime("%Y%m%d%H%M")
    both = pd.concat([raw, later], ignore_index=True)
    both = both[~both["stamp"].duplicated()]
    return both.reset_index(drop=True), pd.to_datetime(both["stamp"], format="%Y%m%d%H%M")


# --------------------------------------------------------------------------- cases
@case
def daily_files_glob(folder):
    raw, ends = table()
    parts(folder, raw, day_of(ends), "day_{}.csv")
    toml(folder, "day_*.csv")


@case
def daily_files_in_month_folders(folder):
    raw, ends = table()
    for day in pd.unique(day_of(ends)):
        (folder / day[:6]).mkdir(exist_ok=True)
    parts(folder, raw, day_of(ends), "{}.csv")
    for f in folder.glob("2*.csv"):
        f.rename(folder / f.name[:6] / f.name)
    toml(folder, "**/*.csv")


@case
def monthly_files_one_month_missing(folder):
    raw, month = monthly(folder)
    (folder / "q_05.csv").unlink()
    toml(folder, "q_*.csv")
    return month == 5


@case
def monthly_files_listed_out_of_order(folder):
    monthly(folder)
    toml(folder, [f"q_{m:02d}.csv" for m in (7, 1, 12, 3, 2, 4, 5, 6, 11, 8, 9, 10)])


@case
def monthly_files_one_header_only(folder):
    raw, month = monthly(folder)
    write(folder / "q_08.csv", lines(raw.iloc[:0]))
    toml(folder, "q_*.csv")
    return month == 8


@case
def monthly_files_crlf_in_one(folder):
    raw, month = monthly(folder)
    write(folder / "q_04.csv", lines(raw[month == 4]), ending="\r\n")
    toml(folder, "q_*.csv")


UNITS_LINE = ",".join(p38.UNITS)


def swapped(folder, later=lambda text: text, first=lambda text: text, **inputs):
    """The example split at 1 July, where a logger was swapped: the old logger's lines as
    `first` and the new one's as `later` rewrite them (lists of lines)."""
    raw, ends = table()
    cut = (ends > "2021-07-01").to_numpy()
    write(folder / "a.csv", first(lines(raw[~cut])))
    write(folder / "b.csv", later(lines(raw[cut])))
    toml(folder, "*.csv", **inputs)


def renamed(text, old, new):
    return [text[0].replace(old, new), *text[1:]]


def replaced(text, old, new):
    return [line.replace(old, new) for line in text]


def with_lines(text, *added):
    return [text[0], *added, *text[1:]]


@case
def logger_swap_column_order(folder):
    def reversed_columns(text):
        return [",".join(line.split(",")[::-1]) for line in text]

    swapped(folder, reversed_columns)


@case
def logger_swap_other_missing_code_declared(folder):
    swapped(folder, lambda text: replaced(text, "-9999", "-6999"), missing=[-9999, -6999])


@case
def logger_swap_other_missing_code_undeclared(folder):
    swapped(folder, lambda text: replaced(text, "-9999", "-7999"))
    return "refused"


@case
def logger_swap_renamed_column_other_names(folder):
    swapped(folder, lambda text: renamed(text, "co2_net", "co2_net_v2"))
    text = (folder / "site.toml").read_text()
    (folder / "site.toml").write_text(text + '\n[input.other_names]\nnee = ["co2_net_v2"]\n')


@case
def logger_swap_renamed_column_unmapped(folder):
    swapped(folder, lambda text: renamed(text, "fric_vel", "ustar_sonic2"))
    return "refused"


@case
def logger_swap_new_logger_writes_units_line(folder):
    swapped(folder, lambda text: with_lines(text, UNITS_LINE))


@case
def logger_swap_new_logger_drops_units_line(folder):
    swapped(folder, first=lambda text: with_lines(text, UNITS_LINE), rows_after_header=1)


@case
def logger_swap_new_logger_writes_title_and_units(folder):
    def titled(text):
        return ['"Quillmoor flux logger 2, program v3"', *with_lines(text, UNITS_LINE)]

    swapped(folder, titled, titled, rows_before_header=1, rows_after_header=1)


@case
def sensor_added_mid_record(folder):
    def leaf_wetness(text):
        return [text[0] + ",leaf_wet"] + [line + ",0" for line in text[1:]]

    swapped(folder, leaf_wetness)


def flux_and_met(folder, shift=None, step=None, names=("flux.csv", "met.csv")):
    """The example as a flux logger's file and a meteorological logger's, the latter's
    clock `shift` behind or only every `step`-th record; both written where `names`."""
    raw = table()[0]
    flux = raw[["stamp", "co2_net", "fric_vel", "co2_grade"]]
    met = raw[["stamp", "sun_in", "air_c", "dryness", "soil_c", "humid"]].copy()
    if shift:
        met["stamp"] = (pd.to_datetime(met["stamp"], format="%Y%m%d%H%M")
                        - pd.Timedelta(shift)).dt.strftime("%Y%m%d%H%M")
    if step:
        met = met.iloc[1::step]
    if names:
        write(folder / names[0], lines(flux))
        write(folder / names[1], lines(met))
        toml(folder, list(names))
    return flux, met


@case
def met_logger_separate_file(folder):
    flux_and_met(folder)


@case
def met_logger_separate_monthly_files(folder):
    flux, met = flux_and_met(folder, names=None)
    month = month_of(table()[1])
    parts(folder, flux, month, "flux_{:02d}.csv")
    parts(folder, met, month, "met_{:02d}.csv")
    toml(folder, "*.csv")


@case
def met_logger_installed_in_july(folder):
    flux, met = flux_and_met(folder)
    later = (table()[1] > "2021-07-01").to_numpy()
    write(folder / "met.csv", lines(met[later]))
    expected = truth(None)
    expected.loc[~later, ["rg", "tair", "vpd", "tsoil", "rh"]] = np.nan
    return expected


@case
def met_logger_clock_30_min_behind(folder):
    flux_and_met(folder, shift="30min")
    return "refused"


@case
def met_logger_clock_one_hour_behind(folder):
    flux_and_met(folder, shift="1h")
    return "refused"


@case
def met_logger_hourly(folder):
    flux_and_met(folder, step=2)
    return "refused"


@case
def monthly_overlap_one_day_identical(folder):
    p38.overlapping_months(folder, 48, 48)


@case
def monthly_overlap_one_day_different_values(folder):
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        rows = np.flatnonzero(month == m)
        rows = np.arange(rows[0], min(rows[-1] + 1 + 48, len(raw)))
        part = raw.iloc[rows].copy()
        tail = part.index > np.flatnonzero(month == m)[-1]
        part.loc[tail, "air_c"] = (part.loc[tail, "air_c"].astype(float) + 0.3).map("{:.2f}".format)
        write(folder / f"q_{m:02d}.csv", lines(part))
    toml(folder, "q_*.csv")
    return "refused"


@case
def monthly_file_ends_mid_line(folder):
    raw, month = monthly(folder)
    text = lines(raw[month == 3])
    write(folder / "q_03.csv", text[:-1] + [text[-1][:14]], ending="\n")
    (folder / "q_03.csv").write_bytes((folder / "q_03.csv").read_bytes()[:-1])
    toml(folder, "q_*.csv")
    return np.arange(len(raw)) == np.flatnonzero(month == 3)[-1]


@case
def monthly_file_partial_record_and_nul_tail(folder):
    raw, month = monthly(folder)
    text = lines(raw[month == 6])
    data = ("\n".join(text[:-1]) + "\n" + text[-1][:20]).encode() + b"\0" * 4096
    (folder / "q_06.csv").write_bytes(data)
    toml(folder, "q_*.csv")
    return np.arange(len(raw)) == np.flatnonzero(month == 6)[-1]


@case
def stray_notes_file_matches_glob(folder):
    monthly(folder)
    (folder / "q_notes.csv").write_text("date,note\n2021-03-04,replaced the analyser filter\n")
    toml(folder, "q_*.csv")
    return "refused"


@case
def stray_copy_of_a_month_matches_glob(folder):
    raw, month = monthly(folder)
    shutil.copy(folder / "q_09.csv", folder / "q_09 - copy.csv")
    toml(folder, "q_*.csv")


@case
def stray_empty_file_matches_glob(folder):
    monthly(folder)
    (folder / "q_upload.csv").write_bytes(b"")
    toml(folder, "q_*.csv")


@case
def same_file_listed_twice(folder):
    monthly(folder)
    toml(folder, [f"q_{m:02d}.csv" for m in range(1, 13)] + ["q_06.csv"])


def civil(ends):
    return (ends.dt.tz_localize("Etc/GMT-1").dt.tz_convert("Europe/Berlin").dt.tz_localize(None))


@case
def civil_time_daily_files(folder):
    raw, ends = table()
    raw["stamp"] = civil(ends).dt.strftime("%Y%m%d%H%M")
    parts(folder, raw, day_of(civil(ends)), "day_{}.csv")
    toml(folder, "day_*.csv", time_zone="Europe/Berlin")


@case
def civil_time_monthly_files(folder):
    raw, ends = table()
    raw["stamp"] = civil(ends).dt.strftime("%Y%m%d%H%M")
    parts(folder, raw, month_of(civil(ends)), "q_{:02d}.csv")
    toml(folder, "q_*.csv", time_zone="Europe/Berlin")


def civil_cut(folder, at, occurrence, back=0):
    """The example in civil time cut into two files at `occurrence` (0 or 1) of the civil
    stamp `at`, the second file starting `back` records earlier (written twice)."""
    raw, ends = table()
    local = civil(ends)
    raw["stamp"] = local.dt.strftime("%Y%m%d%H%M")
    cut = np.flatnonzero((local == at).to_numpy())[occurrence]
    write(folder / "a.csv", lines(raw.iloc[:cut + back]))
    write(folder / "b.csv", lines(raw.iloc[cut:]))
    toml(folder, "*.csv", time_zone="Europe/Berlin")


@case
def civil_time_files_split_in_the_repeated_hour(folder):
    civil_cut(folder, "2021-10-31 02:30", 1)


@case
def civil_time_files_split_after_the_first_pass(folder):
    civil_cut(folder, "2021-10-31 02:00", 1)


@case
def civil_time_restart_repeats_first_pass(folder):
    civil_cut(folder, "2021-10-31 02:00", 0, back=2)


@case
def two_years_in_year_files(folder):
    raw, ends = two_years()
    parts(folder, raw, (ends - pd.Timedelta("30min")).dt.year.to_numpy(), "y_{}.csv")
    toml(folder, "y_*.csv")
    return canonical(folder, raw)


def year_files(folder, edit_later=None):
    """The two years as two files, the second's lines as `edit_later` rewrites them (the
    records as a frame); returns the canonical folder of the unedited records."""
    raw, ends = two_years()
    year = (ends - pd.Timedelta("30min")).dt.year.to_numpy()
    later = raw[year == 2022]
    write(folder / "y_2021.csv", lines(raw[year == 2021]))
    write(folder / "y_2022.csv", lines(edit_later(later, raw) if edit_later else later))
    toml(folder, "y_*.csv")
    return canonical(folder, raw)


@case
def two_years_boundary_record_in_both(folder):
    return year_files(folder, lambda later, raw: pd.concat([raw.iloc[[17519]], later]))


@case
def two_years_boundary_record_in_both_other_values(folder):
    def rewritten(later, raw):
        last = raw.iloc[[17519]].copy()
        last["air_c"] = "-1.50"
        return pd.concat([last, later])

    year_files(folder, rewritten)
    return "refused"


@case
def second_year_stamped_at_interval_start(folder):
    def start_marks(later, raw):
        later = later.copy()
        later["stamp"] = (pd.to_datetime(later["stamp"], format="%Y%m%d%H%M")
                          - pd.Timedelta("30min")).dt.strftime("%Y%m%d%H%M")
        return later

    year_files(folder, start_marks)
    return "refused"


def leap_raw():
    """The example year as 2024, a leap year: 29 February a copy of the 28th's records."""
    raw, ends = table()
    day = day_of(ends)
    february_28 = np.flatnonzero(day == "20210228")
    order = np.concatenate([np.arange(february_28[-1] + 1), february_28,
                            np.arange(february_28[-1] + 1, len(raw))])
    raw = raw.iloc[order].reset_index(drop=True)
    ends = pd.Series(pd.date_range("2024-01-01 00:30", periods=len(raw), freq="30min"))
    raw["stamp"] = ends.dt.strftime("%Y%m%d%H%M")
    return raw, ends


@case
def leap_day_daily_files(folder):
    raw, ends = leap_raw()
    parts(folder, raw, day_of(ends), "day_{}.csv")
    toml(folder, "day_*.csv")
    return canonical(folder, raw)


@case
def leap_day_file_missing(folder):
    raw, ends = leap_raw()
    days = day_of(ends)
    parts(folder, raw, days, "day_{}.csv")
    (folder / "day_20240229.csv").unlink()
    toml(folder, "day_*.csv")
    home = canonical(folder, raw)
    return home, days == "20240229"


@case
def second_year_hourly(folder):
    raw, ends = two_years()
    year = (ends - pd.Timedelta("30min")).dt.year.to_numpy()
    hourly = raw[(year == 2022) & (ends.dt.minute == 0).to_numpy()]
    write(folder / "y_2021.csv", lines(raw[year == 2021]))
    write(folder / "y_2022.csv", lines(hourly))
    toml(folder, "y_*.csv")
    return canonical(folder, pd.concat([raw[year == 2021], hourly]))


# --------------------------------------------------------------------------- network cases
def site(folder, name, path):
    home = folder / name
    home.mkdir(parents=True, exist_ok=True)
    toml(home, path)
    text = (home / "site.toml").read_text().replace("Quillmoor probe", f"Quillmoor {name}")
    (home / f"{name}.toml").write_text(text)
    (home / "site.toml").unlink()
    return home / f"{name}.toml"


def network(folder, sites):
    text = ["# Quillmoor towers are FICTIONAL (invented records).", "[batch]",
            "sites = [" + ", ".join(f'"{s}"' for s in sites) + "]", 'out = "net-out"', ""]
    (folder / "SITES.toml").write_text("\n".join(text))


def two_sites_one_year(folder):
    raw, ends = table()
    data = folder / "data"
    data.mkdir()
    write(data / "tower.csv", lines(raw))
    return raw


@case
def network_relative_paths(folder):
    two_sites_one_year(folder)
    site(folder, "west", "../data/tower.csv")
    network(folder, ["west/west.toml"])
    return "batch:0"


@case
def network_site_files_missing(folder):
    two_sites_one_year(folder)
    site(folder, "west", "../data/tower.csv")
    site(folder, "east", "../data/east_*.csv")
    network(folder, ["west/*.toml", "east/*.toml"])
    return "batch:1"


@case
def network_two_sites_share_one_file(folder):
    two_sites_one_year(folder)
    site(folder, "west", "../data/tower.csv")
    site(folder, "east", "../data/tower.csv")
    network(folder, ["*/*.toml"])
    return "batch:0"


# --------------------------------------------------------------------------- judging
def judge(name, folder, base_tables, cli):
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    if isinstance(expected, str) and expected.startswith("batch"):
        return judge_batch(folder, int(expected.split(":")[1]), cli)
    refusal_expected = isinstance(expected, str) and expected == "refused"

    def want():
        if isinstance(expected, tuple):
            frame = read_site_config(expected[0] / "site.toml").read()[0]
            frame.loc[expected[1]] = np.nan
            return frame
        if isinstance(expected, Path):
            return read_site_config(expected / "site.toml").read()[0]
        if isinstance(expected, pd.DataFrame):
            return expected
        return truth(None if refusal_expected else expected)

    def said(report):
        warned = "; ".join(w.splitlines()[0][:70] for w in report.warnings)[:160]
        return f"{len(report.warnings)} w: {warned}"

    state = p38.reading_state(folder, want, said, refusal_expected)
    if not cli or state[0] == "CRASH":
        return state
    return p38.commands_agree(state, folder, base_tables if expected is None else {})


def judge_batch(folder, want_code, cli):
    if not cli:
        return "skipped", "batch needs the command line"
    elsewhere = folder.parent
    code, out, err = command("batch", str(folder / "SITES.toml"), "--workers", "1", "--quiet",
                             cwd=elsewhere)
    if "Traceback" in err or code not in (0, 1, 2):
        return "CRASH", f"batch exit {code}: {err.strip()[-200:]}"
    failures = folder / "net-out" / "failures.parquet"
    detail = ""
    if failures.exists():
        detail = "; ".join(str(v)[:120] for v in pd.read_parquet(failures).iloc[:, -1])
    if code != want_code:
        return "WRONG", f"batch exit {code} (wanted {want_code}): {err.strip()[-200:]} {detail}"
    done = sorted(p.name for p in (folder / "net-out").iterdir())
    return ("right" if code == 0 else "refused"), f"exit {code} {done} {detail}"[:230]


def main():
    p38.probe(CASES, judge, "cases", 48)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
