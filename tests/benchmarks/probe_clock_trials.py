"""Probe: clock and site-geometry mistakes planted in the independent trials' logger files.

INVENTED DATA: every site here is a trial's fictional site (``trial_twentyninth``,
``trial_thirtieth``, ``trial_twentyeighth``, ``trial_twentyseventh``: their own generators,
their own logger layouts and units, first draw). The clock and geometry checks were built on
``fluxpart.scenarios``; this probe measures them on records they were not built on.

Each site-year is written by its trial's own writer, once as it is (any clock or geometry
text is a false alarm) and once per planted mistake (the mistakes of
``bench_clock_mistakes.py`` and four more):

- stamps shifted by ±30 min, ±1 h, ±2 h, +12 h;
- a daylight-saving logger declared as standard time (``bench_clock_mistakes``'s rules);
  the same with the repeated hour's second records dropped;
- interval-end stamps declared as starts (the stamps one record late, ``time_marks =
  "start"``);
- ``utc_offset`` of the wrong sign; the latitude's or the longitude's sign flipped; latitude
  and longitude swapped (where |longitude| <= 90); the latitude in degrees-minutes written
  as decimal degrees (52°30' as 52.30);
- a logger clock that gains 5 min a month (a record at logger stamp t holds the average
  over the interval that began drift(t) earlier in true time, interpolated between the two
  records it overlaps; the stamps on the regular grid);
- a clock reset one hour ahead or back half-way through the record (a logger set to
  another zone: an hour of stamps absent, or written twice);
- a file in UTC declared as local standard time (the stamps ``utc_offset`` hours early).

For each case ``fluxpart check``'s work is done in this one process (the reader, then
``check_record``: the clock verdict and the preflight findings): *refused* where the reader
refuses or a problem stops the run, *warned* where a new text names the clock, the stamps,
the latitude, the longitude or ``utc_offset``, *silent* otherwise. Every silent case (and
the unplanted base) and every warned case (the run goes on past a warning) is then run (:func:`fluxpart.process_site_config`, what ``fluxpart
run`` calls; a run warning naming the clock makes it *warned (run)*) and the annual NEE's
move is printed in units of the base run's stated 1 sigma of NEE (``nee_uncertainty_total``;
the runs use ``ustar_bootstrap_draws = 0`` and ``random_error_draws = 100`` to save time, so
that sigma leaves out the u* part and the ratio is on the strict side).

    OMP_NUM_THREADS=1 PYTHONPATH=$PWD nice -n 10 python tests/benchmarks/probe_clock_trials.py \
        [--trials 29 30 28 27] [--sites W,A] [--only stamps] [--csv FILE] [--no-run]
"""

from __future__ import annotations

import argparse
import dataclasses
import importlib
import re
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

_HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(_HERE.parents[1]), str(_HERE)]

from bench_clock_mistakes import _sunday, degrees_minutes  # noqa: E402
from trial_scoring import write_logger_site  # noqa: E402

from fluxpart.config import Config  # noqa: E402
from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.io import read_site_config  # noqa: E402
from fluxpart.pipeline import check_record, process_site_config  # noqa: E402

TRIALS = {"29": ("trial_twentyninth", "_tower.csv"), "30": ("trial_thirtieth", "_tower.csv"),
          "28": ("trial_twentyeighth", "_tower.csv"), "27": ("trial_twentyseventh", "_mast.csv")}
SHIFTS = (-30, 30, -60, 60, -120, 120, 720)
DRIFT_MINUTES_PER_MONTH = 5.0     # a poor logger crystal, not corrected all year (invented)
PROCESSING = "ustar_bootstrap_draws = 0\nrandom_error_draws = 100\n"
#: words of a text about the clock or the site's geometry (bench_clock_mistakes' set)
CLOCK_WORDS = re.compile(r"clock|stamp|latitude|longitude|utc_offset|time_zone|time_marks|"
                         r"hemisphere|daylight", re.IGNORECASE)


def daylight_stamps(index, southern):
    """Civil stamps of a logger on daylight-saving time (+1 h in summer) [local time], in
    every year the record spans (``bench_clock_mistakes.daylight_stamps`` takes the first
    year's dates only, and the trials' budget years start in other months).

    Northern rule: the last Sundays of March and October; southern: the first Sundays of
    October and April; the change at 02:00 standard time (common practice (m)).
    """
    summer = np.zeros(len(index), bool)
    for year in range(index[0].year - 1, index[-1].year + 1):
        if southern:
            start = _sunday(year, 10, False) + pd.Timedelta(hours=2)
            end = _sunday(year + 1, 4, False) + pd.Timedelta(hours=2)
        else:
            start = _sunday(year, 3, True) + pd.Timedelta(hours=2)
            end = _sunday(year, 10, True) + pd.Timedelta(hours=2)
        summer |= (index >= start) & (index < end - pd.Timedelta(hours=1))
    return index + pd.to_timedelta(np.where(summer, 60, 0), unit="min")


def _drifted(data, step_minutes):
    """Records under a logger clock gaining DRIFT_MINUTES_PER_MONTH: the grid stamp t holds
    the average over the logger's interval, which began drift(t) before t in true time:
    linearly interpolated between the two records it overlaps (NaN where either is)."""
    elapsed_days = (data.index - data.index[0]) / pd.Timedelta(days=1)
    lag = np.asarray(elapsed_days) / 30.44 * DRIFT_MINUTES_PER_MONTH / step_minutes
    whole = np.floor(lag).astype(int)
    part = (lag - whole)[:, None]
    values = data.to_numpy(dtype=float)
    rows = np.arange(len(data)) - whole
    padded = np.vstack([np.full((1, values.shape[1]), np.nan), values])   # row -1: NaN
    near = padded[np.clip(rows, -1, None) + 1]
    far = padded[np.clip(rows - 1, -1, None) + 1]
    return pd.DataFrame((1.0 - part) * near + part * far, index=data.index,
                        columns=data.columns)


def _reset(minutes):
    """Stamps moved by `minutes` from the record's middle on (a clock set to another zone)."""
    def change(data, step):
        middle = len(data) // 2
        moved = np.where(np.arange(len(data)) >= middle, minutes, 0)
        out = data.copy()
        out.index = data.index + pd.to_timedelta(moved, unit="min")
        return out
    return change


def _stamps(change):
    def apply(data, step):
        out = data.copy()
        out.index = change(data.index, step)
        return out
    return apply


def _deduped(southern):
    """Daylight-saving stamps with the repeated hour's second records dropped."""
    def change(data, step):
        out = _stamps(lambda i, s: daylight_stamps(i, southern))(data, step)
        return out[~out.index.duplicated()]
    return change


def mistakes(site):
    """name -> (data change (data, step) -> data or None, site changes, stamps declared
    as starts)."""
    out = {}
    for minutes in SHIFTS:
        out[f"stamps {minutes:+d} min"] = (
            _stamps(lambda i, s, m=minutes: i + pd.Timedelta(minutes=m)), {}, False)
    out["daylight saving as standard"] = (
        _stamps(lambda i, s: daylight_stamps(i, site.lat < 0)), {}, False)
    out["daylight saving, repeated hour dropped"] = (_deduped(site.lat < 0), {}, False)
    out["end stamps as starts"] = (None, {}, True)
    if site.utc_offset != 0:
        out["utc_offset sign"] = (None, {"utc_offset": -site.utc_offset}, False)
        out["file in UTC declared local"] = (
            _stamps(lambda i, s: i - pd.Timedelta(hours=site.utc_offset)), {}, False)
    out["latitude sign"] = (None, {"lat": -site.lat}, False)
    out["longitude sign"] = (None, {"lon": -site.lon}, False)
    if abs(site.lon) <= 90:
        out["lat/lon swapped"] = (None, {"lat": site.lon, "lon": site.lat}, False)
    dm = degrees_minutes(site.lat)
    if abs(dm - site.lat) > 0.05:
        out["latitude deg-min"] = (None, {"lat": dm}, False)
    out["clock drift +5 min/month"] = (_drifted, {}, False)
    out["clock reset +1 h mid-year"] = (_reset(60), {}, False)
    out["clock reset -1 h mid-year"] = (_reset(-60), {}, False)
    return out


def write_case(module, suffix, site, data, folder, starts):
    """The trial's own logger file and TOML; `starts`: interval-end stamps declared start."""
    layout = module.LAYOUTS[site.key]
    if starts:          # each record's end written, declared as its start
        data = data.copy()
        data.index = data.index + (data.index[1] - data.index[0])
        layout = (layout[0], layout[1], "start", *layout[3:])
    return write_logger_site(site, data, folder, layout, module.UNIT_CONVERSIONS, PROCESSING,
                             module.EVENTS.get(site.key, ()), writer="probe_clock_trials.py",
                             csv_suffix=suffix)


def check_case(path):
    """(status, texts) as ``fluxpart check`` would list them, in this process."""
    try:
        site_config = read_site_config(path)
        config = Config.from_toml(path)
        frame, report = site_config.read(unit_problems="report")
        verdict, findings = check_record(
            frame, site_config.site, config, time_marks=report.time_marks,
            shift_applied_minutes=report.shift_minutes, columns=report.columns,
            time_zone=report.stamp_conversions.get("time_zone"))
    except FluxpartError as error:
        return "refused", [str(error).splitlines()[0]]
    stops = list(verdict.problems) if verdict is not None else []
    stops += [str(f) for f in findings if f.fatal]
    if stops:
        return "refused", stops
    texts = [str(f) for f in findings] + list(report.warnings) + list(report.notes)
    return "checked", texts


def run_case(path):
    """(annual table, clock warnings) of a run, or (None, [error])."""
    try:
        result = process_site_config(path)
    except FluxpartError as error:
        return None, [str(error).splitlines()[0]]
    return result.annual, [w for w in result.warnings if CLOCK_WORDS.search(w)]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--trials", nargs="*", default=["29", "30", "28", "27"])
    parser.add_argument("--sites", help="comma-separated site keys (default: all)")
    parser.add_argument("--only", help="only the mistakes whose name contains one of these "
                        "(comma-separated)")
    parser.add_argument("--csv", help="write one row per case")
    parser.add_argument("--no-run", action="store_true", help="check only")
    args = parser.parse_args(argv)
    warnings.simplefilter("ignore", RuntimeWarning)     # numpy's on all-NaN slices
    rows = []
    started = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        for trial in args.trials:
            name, suffix = TRIALS[trial]
            module = importlib.import_module(name)
            keys = args.sites.split(",") if args.sites else list(module.SITES)
            for key in keys:
                if key not in module.SITES:
                    continue
                site = module.SITES[key]
                data, _ = module.simulate(site, frozenset(), 0)
                step = (data.index[1] - data.index[0]) / pd.Timedelta(minutes=1)
                folder = Path(tmp) / f"t{trial}{key}"
                label = f"t{trial}:{key}:{site.lat:g}:{step:g}"
                path = write_case(module, suffix, site, data, folder, False)
                status, clean_texts = check_case(path)
                alarms = [t for t in clean_texts if CLOCK_WORDS.search(t)]
                base, sigma = None, None
                if not args.no_run:
                    base, run_alarms = run_case(path)
                    alarms += run_alarms
                    if base is not None:
                        sigma = base["nee_uncertainty_total"].to_numpy()
                clean_status = "refused" if status == "refused" else (
                    "false alarm" if alarms else "clean")
                rows.append({"site": label, "mistake": "none", "status": clean_status,
                             "text": (alarms + [""])[0][:200]})
                print(label, "none", clean_status, (alarms + [""])[0][:200], flush=True)
                for mistake, (change, site_changes, starts) in mistakes(site).items():
                    if args.only and not any(part in mistake
                                             for part in args.only.split(",")):
                        continue
                    planted = dataclasses.replace(site, **site_changes)
                    edited = data if change is None else change(data, step)
                    path = write_case(module, suffix, planted, edited, folder, starts)
                    status, texts = check_case(path)
                    new = [t for t in texts if t not in clean_texts]
                    said = [t for t in new if CLOCK_WORDS.search(t)]
                    if status == "refused":
                        said = texts
                    else:
                        status = "warned" if said else "silent"
                    row = {"site": label, "mistake": mistake, "status": status,
                           "text": (said + [""])[0][:200]}
                    if status in ("silent", "warned") and base is not None:
                        annual, warned = run_case(path)
                        if annual is None:
                            row.update(status="refused (run)", text=warned[0][:200])
                        else:
                            if warned and status == "silent":
                                row.update(status="warned (run)", text=warned[0][:200])
                            years = min(len(annual), len(base))
                            moved = (annual["nee"].to_numpy()[:years]
                                     - base["nee"].to_numpy()[:years])
                            worst = int(np.argmax(np.abs(moved)))
                            row["d_nee"] = float(moved[worst])
                            row["sigma"] = float(sigma[worst])
                            row["d_sigma"] = float(moved[worst] / sigma[worst])
                    rows.append(row)
                    print(label, mistake, row["status"],
                          f"{row.get('d_sigma', np.nan):+.1f}σ", row["text"][:160], flush=True)
                if args.csv:
                    pd.DataFrame(rows).to_csv(args.csv, index=False)
    table = pd.DataFrame(rows)
    if args.csv:
        table.to_csv(args.csv, index=False)
    summary(table)
    print(f"{time.perf_counter() - started:.0f} s")
    return 0


def summary(table):
    """Per mistake: cases, refused, warned, silent; silent and warned cases beyond 1 sigma."""
    print("\nmistake | cases | refused | warned | silent | silent > 1 sigma | silent "
          "|dNEE|/sigma median / max | warned and run: > 1 sigma, max |dNEE|/sigma")
    for mistake, part in table.groupby("mistake", sort=False):
        status = part["status"].str.split(" ").str[0]
        counts = {s: int((status == s).sum()) for s in ("refused", "warned", "silent")}
        if mistake == "none":
            print(f"none | {len(part)} | false alarms "
                  f"{int((part['status'] == 'false alarm').sum())} | refused "
                  f"{counts['refused']}")
            continue
        line = (f"{mistake} | {len(part)} | {counts['refused']} | {counts['warned']} | "
                f"{counts['silent']}")
        moved = part.get("d_sigma", pd.Series(np.nan, index=part.index)).abs()
        silent, warned = moved[part["status"] == "silent"].dropna(), moved[
            status == "warned"].dropna()
        line += (f" | {int((silent > 1).sum())} | {silent.median():.1f} / {silent.max():.1f}"
                 if len(silent) else " | - | -")
        line += (f" | {int((warned > 1).sum())}, {warned.max():.1f}" if len(warned) else " | -")
        print(line)


if __name__ == "__main__":
    raise SystemExit(main())
