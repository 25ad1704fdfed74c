"""Benchmark: clock and site-geometry mistakes planted in logger files (round clock11).

Run ``OMP_NUM_THREADS=1 python tests/benchmarks/bench_clock_mistakes.py`` from the
repository root (takes tens of minutes on a shared machine; ``--sites N`` for fewer).

Each site-year (``fluxpart.scenarios.generate`` for seeds 0.., all seven archetypes, 30 and
60 min; the same draws moved to 2° N, 2° S, 72° N, 78° N and 75° S for the equator and
the polar day and night; ``fluxpart.demo.site_year``) is written as a logger CSV of start
stamps with a TOML config and read by :func:`fluxpart.process_site_config` (what ``fluxpart
run`` calls), once as it is (any refusal or clock warning is a false alarm) and once per
planted mistake:

- stamps shifted by ±30 min, ±1 h, ±2 h, +12 h;
- a daylight-saving logger (northern: last Sunday of March to last Sunday of October;
  southern: first Sunday of October to first Sunday of April; the autumn hour written
  twice, the spring hour absent, as a logger on civil time writes them) declared as
  standard time; the same with the repeated hour's second records dropped (a user's
  clean-up of the duplicate stamps);
- interval-end stamps declared as starts;
- ``utc_offset`` of the wrong sign; the latitude's or the longitude's sign flipped;
  latitude and longitude swapped; the latitude in degrees-minutes written as decimal
  degrees (52°30′ as 52.30).

A case is *refused* where the run stops (any ``FluxpartError``), *warned* where it runs with
a warning that names the clock, the stamps, the latitude, the longitude or ``utc_offset``,
*silent* otherwise; for silent and warned cases the annual NEE, GPP and Reco (both
methods) moved against the unplanted run are printed, and compared with the unplanted run's 1 σ
of NEE (the 95 % interval's half-width / 1.96). The runs use ``ustar_bootstrap_draws =
0`` and ``random_error_draws = 100`` to save time (the same in both runs).
"""

from __future__ import annotations

import argparse
import dataclasses
import re
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

_ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(_ROOT)]

from fluxpart import demo, scenarios  # noqa: E402
from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.pipeline import process_site_config  # noqa: E402
from fluxpart.site import Site  # noqa: E402

COLUMNS = ("nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh", "nee_flag")
SHIFTS = (-30, 30, -60, 60, -120, 120, 720)
#: words of a warning about the clock or the site's geometry
CLOCK_WORDS = re.compile(r"clock|stamp|latitude|longitude|utc_offset|time_zone|time_marks|"
                         r"hemisphere|daylight", re.IGNORECASE)


def _sunday(year, month, last):
    days = pd.date_range(f"{year}-{month:02d}-01", periods=31, freq="D")
    days = days[(days.month == month) & (days.dayofweek == 6)]
    return days[-1] if last else days[0]


def daylight_stamps(index, southern):
    """Civil stamps of a logger on daylight-saving time (+1 h in summer) [local time].

    Northern rule: 01:00 UTC of the last Sundays of March and October, taken here at
    02:00 standard time (common practice (m)); southern: the first Sundays of October
    and April.
    """
    year = index[0].year
    if southern:
        start = _sunday(year, 10, False) + pd.Timedelta(hours=2)
        end = _sunday(year, 4, False) + pd.Timedelta(hours=2)
        summer = (index >= start) | (index < end - pd.Timedelta(hours=1))
    else:
        start = _sunday(year, 3, True) + pd.Timedelta(hours=2)
        end = _sunday(year, 10, True) + pd.Timedelta(hours=2)
        summer = (index >= start) & (index < end - pd.Timedelta(hours=1))
    return index + pd.to_timedelta(np.where(summer, 60, 0), unit="min")


def site_years(count):
    """(name, frame, site, interval) of the benchmark's site-years."""
    out = []
    for seed in range(count):
        sy = scenarios.generate(seed)
        sc = sy.scenario
        out.append((f"s{seed}:{sc.archetype[:10]}:{sc.interval_minutes}", sy.frame, sy.site,
                    sc.interval_minutes))
    # the equator and the poles: the same draws moved
    moves = ((2.0, 36.0, 3.0, 60, 3), (-2.0, -60.0, -4.0, 30, 1), (72.0, 25.0, 2.0, 30, 4),
             (78.0, 15.0, 1.0, 30, 11), (-75.0, 165.0, 11.0, 60, 5))
    for latitude, longitude, offset, interval, seed in moves:
        sc = scenarios.draw(seed)
        site = Site(name="moved (fictional)", latitude=latitude, longitude=longitude,
                    utc_offset=offset)
        sc = dataclasses.replace(sc, site=site, interval_minutes=interval)
        sy = scenarios.generate(sc)
        out.append((f"moved:{latitude:g}:{interval}", sy.frame, sy.site, interval))
    frame, _ = demo.site_year(0)
    out.append(("demo:30", frame, Site(name="Quillmoor (fictional)", latitude=49.3,
                                       longitude=10.2, utc_offset=1.0), 30))
    return out


def degrees_minutes(latitude):
    """52.5 -> 52.30: degrees and minutes written as decimal degrees."""
    sign = -1.0 if latitude < 0 else 1.0
    whole = np.floor(abs(latitude))
    return sign * (whole + round((abs(latitude) - whole) * 60.0) / 100.0)


def mistakes(site, interval):
    """name -> (stamp change (index -> index) or None, site changes)."""
    out = {}
    for minutes in SHIFTS:
        out[f"stamps {minutes:+d} min"] = (lambda i, m=minutes: i + pd.Timedelta(minutes=m), {})
    out["daylight saving as standard"] = (
        lambda i: daylight_stamps(i, site.latitude < 0), {})
    out["daylight saving, repeated hour dropped"] = (
        lambda i: daylight_stamps(i, site.latitude < 0), {"dedupe": True})
    out["end stamps as starts"] = (lambda i: i + pd.Timedelta(minutes=interval), {})
    if site.utc_offset != 0:
        out["utc_offset sign"] = (None, {"utc_offset": -site.utc_offset})
    out["latitude sign"] = (None, {"latitude": -site.latitude})
    out["longitude sign"] = (None, {"longitude": -site.longitude})
    if abs(site.longitude) <= 90:
        out["lat/lon swapped"] = (None, {"latitude": site.longitude,
                                         "longitude": site.latitude})
    dm = degrees_minutes(site.latitude)
    if abs(dm - site.latitude) > 0.05:
        out["latitude deg-min"] = (None, {"latitude": dm})
    return out


def write_case(folder, frame, site, stamps):
    data = frame.loc[:, [c for c in COLUMNS if c in frame]].copy()
    data.insert(0, "stamp", stamps.strftime("%Y-%m-%d %H:%M"))
    data.to_csv(folder / "tower.csv", index=False, na_rep="-9999", float_format="%.4f")
    columns = "\n".join(f'{c} = "{c}"' for c in COLUMNS if c in frame)
    (folder / "site.toml").write_text(f"""[site]
name = "bench (fictional)"
latitude = {site.latitude!r}
longitude = {site.longitude!r}
utc_offset = {site.utc_offset!r}

[input]
path = "tower.csv"
time_column = "stamp"
time_format = "%Y-%m-%d %H:%M"
time_marks = "start"
missing = [-9999]

[input.columns]
{columns}

[processing]
seed = 0
ustar_bootstrap_draws = 0
random_error_draws = 100
""")
    return folder / "site.toml"


def run_case(folder, frame, site, stamps):
    path = write_case(folder, frame, site, stamps)
    try:
        result = process_site_config(path)
    except FluxpartError as error:
        return "refused", str(error).splitlines()[0][:110], None
    clock = [w for w in result.warnings if CLOCK_WORDS.search(w)]
    annual = result.annual.iloc[0]
    return ("warned" if clock else "silent"), (clock[0][:110] if clock else ""), annual


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--sites", type=int, default=35, help="generated seeds 0..N-1")
    parser.add_argument("--csv", help="write one row per case")
    parser.add_argument("--only", help="run only the mistakes whose name contains this")
    args = parser.parse_args()
    rows = []
    started = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for name, frame, site, interval in site_years(args.sites):
            status, text, base = run_case(folder, frame, site, frame.index)
            sigma = np.nan
            if base is not None:
                sigma = (base["nee_ci95_high"] - base["nee_ci95_low"]) / 2 / 1.96
            rows.append({"site": name, "mistake": "none", "status": status, "text": text,
                         "sigma": sigma})
            print(name, "none", status, text, flush=True)
            for mistake, (stamp_change, changes) in mistakes(site, interval).items():
                if args.only and args.only not in mistake:
                    continue
                stamps = frame.index if stamp_change is None else stamp_change(frame.index)
                data = frame
                if changes.pop("dedupe", False):     # a user kept the first of a repeated hour
                    keep = ~stamps.duplicated()
                    data, stamps = frame[keep], stamps[keep]
                planted = dataclasses.replace(site, **changes)
                status, text, annual = run_case(folder, data, planted, stamps)
                row = {"site": name, "mistake": mistake, "status": status, "text": text,
                       "sigma": sigma}
                if annual is not None and base is not None:
                    for column in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime",
                                   "reco_daytime"):
                        row[f"d_{column}"] = float(annual[column] - base[column])
                rows.append(row)
                print(name, mistake, status, round(row.get("d_nee", np.nan), 1), text,
                      flush=True)
    table = pd.DataFrame(rows)
    if args.csv:
        table.to_csv(args.csv, index=False)
    summary(table)
    print(f"{time.perf_counter() - started:.0f} s")


def summary(table):
    print("\nmistake | cases | refused | warned | silent | silent > 1 sigma | "
          "silent |dNEE| median / max | |dGPP| max | |dReco| max (nighttime) | "
          "|dGPP| max | |dReco| max (daytime) [g C m-2]")
    for mistake, part in table.groupby("mistake", sort=False):
        n = len(part)
        counts = {s: int((part["status"] == s).sum()) for s in ("refused", "warned", "silent")}
        silent = part[part["status"] == "silent"]
        line = f"{mistake} | {n} | {counts['refused']} | {counts['warned']} | {counts['silent']}"
        if len(silent) and "d_nee" in silent and mistake != "none":
            d = silent["d_nee"].abs()
            big = int((d > silent["sigma"]).sum())
            line += (f" | {big} | {d.median():.1f} / {d.max():.1f} | "
                     f"{silent['d_gpp_nighttime'].abs().max():.1f} | "
                     f"{silent['d_reco_nighttime'].abs().max():.1f} | "
                     f"{silent['d_gpp_daytime'].abs().max():.1f} | "
                     f"{silent['d_reco_daytime'].abs().max():.1f}")
        print(line)


if __name__ == "__main__":
    main()
