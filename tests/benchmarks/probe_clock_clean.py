"""Probe: false alarms of the clock check on clean records it was not built on.

INVENTED DATA: every site is fictional. Two parts, each in this one process:

- ``--probes``: the clean generators' site-years (``probe_clean_sites*.py``, their own
  writers), read as ``fluxpart check`` reads them, then :func:`fluxpart.clock.check_clock`
  called as ``screening_stage.clock_and_preflight`` calls it (the reader's stamp
  convention, shift and time zone);
- ``--towers``: clean Rg of things a tower meets (pvlib's sun and Haurwitz clear sky, the
  clouds of ``tests/clock_sites.py``): a sensor re-levelled mid-year, a mast leaning
  further over the year, a tree growing on one side, snow on the dome for weeks, a
  pyranometer replaced by one of poorer cosine response, polar sites, records of 9 to 12
  months, half-hour zones, hourly records, budget years from 1 July; and three true
  drifts (``DRIFT*``: the power the probe must keep).

Per site-year the verdict, whether a drift was named, and the drift rule's quantities
(change over the record against the threshold, the peak's and the edges' scatter about
their lines, the edges' rate over the peak's, the day length's change over the peak's).

    OMP_NUM_THREADS=1 PYTHONPATH=$PWD nice -n 10 python tests/benchmarks/probe_clock_clean.py \\
        [--probes probe_clean_sites,probe_clean_sites_third] [--towers] [--seeds 1,2,3]
"""

from __future__ import annotations

import argparse
import datetime as dt
import importlib
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pvlib

_HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(_HERE.parents[1]), str(_HERE.parent), str(_HERE)]

from clock_sites import CLOUDINESS, _clearness  # noqa: E402

from fluxpart import clock  # noqa: E402
from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.io import read_site_config  # noqa: E402
from fluxpart.robust_scale import scaled_mad  # noqa: E402

PROBES = ["probe_clean_sites", "probe_clean_sites_third", "probe_clean_sites_fourth",
          "probe_clean_sites_weather", "probe_clean_sites_fifth", "probe_clean_sites_sixth"]


def drift_quantities(verdict, threshold):
    """The drift rule's quantities as text (clock._drifting_clock's, not its decision)."""
    used = verdict.months[verdict.months["used"]]
    if len(used) < clock.MIN_WINDOWS:
        return "too few months"
    used = clock._unwrapped_shifts(used)
    used = used[used["sun_sets"].astype(bool)]
    peak = used["shift_minutes"].to_numpy(float)
    edge = used["edge_shift_minutes"].to_numpy(float)
    width = clock._daylength_mismatch(used)
    ok = np.isfinite(peak) & np.isfinite(edge)
    periods = used.index.to_period("M")
    months = np.array([(p - periods[0]).n for p in periods], float)[ok]
    if ok.sum() < clock.DRIFT_MIN_MONTHS or months[-1] - months[0] < clock.DRIFT_MIN_SPAN_MONTHS:
        return "not judged (months)"
    peak, edge, width = peak[ok], edge[ok], width[ok]
    span = months[-1] - months[0]

    def line(values):
        slope, intercept = np.polyfit(months, values, 1)
        residual = values - (slope * months + intercept)
        return slope, scaled_mad(residual, float(np.median(residual)))

    rate, scatter = line(peak)
    edge_rate, edge_scatter = line(edge)
    width_change = np.polyfit(months, width, 1)[0] * span if np.isfinite(width).all() else np.nan
    return (f"change {rate * span:+.1f}/{threshold:.0f} min, scatter {scatter:.1f}, edges "
            f"{edge_scatter:.1f} min, edge/peak rate {edge_rate / rate:.2f}, day length/peak "
            f"{width_change / (rate * span):.2f}")


def report(label, index, rg, latitude, longitude, utc_offset, interval, **reader):
    verdict = clock.check_clock(index, rg, latitude, longitude, utc_offset, interval, **reader)
    drift = any("drifts" in problem for problem in verdict.problems)
    quantities = drift_quantities(verdict, clock.shift_threshold_minutes(interval))
    print(f"{label}: {verdict.status} drift={drift} | {quantities}", flush=True)
    for problem in verdict.problems:
        print(f"    {problem[:200]}", flush=True)
    return drift


def probe_sites(names, seeds):
    alarms = 0
    for name in names:
        module = importlib.import_module(name)
        for seed in seeds:
            for spec in module.SITES:
                with tempfile.TemporaryDirectory() as folder:
                    try:
                        source = read_site_config(module.write_site(spec, seed, Path(folder)))
                        frame, read = source.read(unit_problems="report")
                    except FluxpartError as error:
                        print(f"{name} s{seed} {spec[0]}: refused by the reader: "
                              f"{str(error).splitlines()[0][:120]}", flush=True)
                        continue
                interval = (frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1)
                site = source.site
                alarms += report(
                    f"{name} s{seed} {spec[0]}", frame.index, frame["rg"].to_numpy(float),
                    site.latitude, site.longitude, site.utc_offset, interval,
                    time_marks=read.time_marks, shift_applied_minutes=float(read.shift_minutes or 0),
                    time_zone=(read.stamp_conversions or {}).get("time_zone"))
    return alarms


def tower_rg(latitude, longitude, utc_offset, *, start="2021-01-01", days=365, step=30, seed=0,
             cloud="moderate", tilt=None, tilt_azimuth=90.0, shade=None, shade_elevation=None,
             cosine=None, snow=(), drift=0.0):
    """Measured Rg [W m-2] at interval starts, local standard time. `tilt`,
    `shade_elevation` [degrees] and `cosine` (the beam times 1 - a (zenith/90)^3) are
    functions of the share of the record elapsed; `snow`: (first, last) dates of a dome
    under snow (a day's Rg times 0.02-0.3); `drift`: a clock gaining minutes a month."""
    rng = np.random.default_rng(seed)
    fine = 10 if step >= 30 else 5
    first, pad = pd.Timestamp(start), pd.Timedelta(days=1)
    local = pd.date_range(first - pad, first + pd.Timedelta(days=days) + pad, freq=f"{fine}min",
                          inclusive="left")
    middle = (local + pd.Timedelta(minutes=fine / 2)).tz_localize(
        dt.timezone(dt.timedelta(hours=utc_offset)))
    sun = pvlib.solarposition.get_solarposition(middle, latitude, longitude)
    zenith = sun["apparent_zenith"].to_numpy()
    ghi = pvlib.clearsky.haurwitz(sun["apparent_zenith"])["ghi"].to_numpy()
    elapsed = np.clip(((local - first) / pd.Timedelta(days=days)).to_numpy(float), 0, 1)
    if tilt or shade or cosine:
        split = pvlib.irradiance.erbs(ghi, sun["zenith"].to_numpy(), middle)
        dni, dhi = split["dni"].to_numpy(), split["dhi"].to_numpy()
        if shade:
            azimuth = sun["azimuth"].to_numpy()
            dni = np.where((azimuth >= shade[0]) & (azimuth <= shade[1])
                           & (sun["elevation"].to_numpy() < shade_elevation(elapsed)), 0.0, dni)
        if cosine:
            dni = dni * (1.0 - cosine(elapsed) * np.clip(zenith / 90.0, 0, 1) ** 3)
        total = pvlib.irradiance.get_total_irradiance(
            tilt(elapsed) if tilt else 0.0, tilt_azimuth, zenith, sun["azimuth"].to_numpy(),
            dni, ghi, dhi)
        ghi = np.nan_to_num(np.asarray(total["poa_global"], float))
    per_day = 1440 // fine
    rg = pd.Series(ghi * _clearness(rng, len(local) // per_day, per_day, CLOUDINESS[cloud]),
                   index=local)
    for begin, end in snow:
        covered = (rg.index >= begin) & (rg.index < end)
        cover = np.repeat(rng.uniform(0.02, 0.3, covered.sum() // per_day + 1), per_day)
        rg[covered] = rg[covered] * cover[:covered.sum()]
    rg = rg.resample(f"{step}min", label="left", closed="left").mean()
    if drift:
        lag = ((rg.index - rg.index[0]) / pd.Timedelta(days=30.44)).to_numpy() * drift / step
        rg = pd.Series(np.interp(np.arange(len(rg)) - lag, np.arange(len(rg)), rg.to_numpy()),
                       index=rg.index)
    rg = rg[(rg.index >= first) & (rg.index < first + pd.Timedelta(days=days))]
    return rg + rng.standard_normal(len(rg)) + 0.02 * rg.to_numpy() * rng.standard_normal(len(rg))


def ramp(a, b):
    return lambda share: a + (b - a) * share


def step_at(a, b, at=0.5):
    return lambda share: np.where(share < at, a, b)


ALPS, SOUTH = (47.5, 8.0, 1.0), (-33.0, 151.0, 10.0)
TOWERS = {
    "relevelled 3° east mid-year": (ALPS, dict(tilt=step_at(3.0, 0.0))),
    "relevelled 4° west mid-year": (ALPS, dict(tilt=step_at(4.0, 0.0), tilt_azimuth=270.0)),
    "mast leaning 0-4° east": (ALPS, dict(tilt=ramp(0, 4))),
    "mast leaning 0-5° west, south": (SOUTH, dict(tilt=ramp(0, 5), tilt_azimuth=270.0)),
    "mast leaning 0-4° north": (ALPS, dict(tilt=ramp(0, 4), tilt_azimuth=0.0)),
    "tree east 0-25°": ((52.0, 13.0, 1.0), dict(shade=(45, 135), shade_elevation=ramp(0, 25))),
    "tree east 5-35°": ((42.0, -72.0, -5.0), dict(shade=(30, 150), shade_elevation=ramp(5, 35))),
    "tree west 0-25°": ((52.0, 13.0, 1.0), dict(shade=(225, 315), shade_elevation=ramp(0, 25))),
    "snow 6 weeks": ((61.8, 24.3, 2.0), dict(snow=[("2021-01-05", "2021-02-16"),
                                                  ("2021-12-01", "2021-12-20")])),
    "snow 10 weeks": ((45.0, -93.0, -6.0), dict(snow=[("2021-01-01", "2021-03-15")])),
    "cosine response mid-year": (ALPS, dict(cosine=step_at(0.0, 0.25))),
    "cosine response after 3 months": ((35.0, -106.0, -7.0), dict(cosine=step_at(0.25, 0.0, 0.25))),
    "polar 70° N": ((70.0, 25.0, 1.0), {}),
    "polar 74.5° N": ((74.5, -20.5, -1.0), {}),
    "polar 78.9° N": ((78.9, 11.9, 1.0), {}),
    "polar 72° S": ((-72.0, 2.5, 0.0), {}),
    "polar 69° N tilted east": ((69.0, -150.0, -9.0), dict(tilt=ramp(3, 3))),
    "9 months from March": (ALPS, dict(start="2021-03-01", days=275)),
    "9 months tilted east": (ALPS, dict(days=273, tilt=ramp(3, 3))),
    "10 months tilted west": ((40.0, -105.0, -7.0), dict(start="2021-02-01", days=304,
                                                        tilt=ramp(3, 3), tilt_azimuth=270.0)),
    "10 months shaded west": ((52.0, 5.0, 1.0), dict(start="2021-04-01", days=305,
                                                    shade=(240, 300), shade_elevation=ramp(20, 20))),
    "11 months tilted east, south": ((-35.0, 149.0, 10.0), dict(start="2021-06-01", days=334,
                                                               tilt=ramp(3, 3))),
    "12 months tilted south": (ALPS, dict(tilt=ramp(4, 4), tilt_azimuth=180.0)),
    "UTC+5:30": ((26.0, 77.0, 5.5), {}),
    "UTC+9:30": ((-34.9, 138.6, 9.5), {}),
    "UTC-3:30": ((48.5, -56.0, -3.5), {}),
    "hourly": (ALPS, dict(step=60)),
    "hourly tilted east": ((38.0, -121.0, -8.0), dict(step=60, tilt=ramp(3, 3))),
    "hourly 68° N": ((68.3, 19.0, 1.0), dict(step=60)),
    "from 1 July": (ALPS, dict(start="2021-07-01")),
    "from 1 July tilted east, south": ((-30.0, -70.0, -4.0), dict(start="2021-07-01",
                                                                  tilt=ramp(3, 3))),
    "from 1 July, tree east": (ALPS, dict(start="2021-07-01", shade=(45, 135),
                                          shade_elevation=ramp(0, 25))),
    "monsoon tilted east": ((23.0, 113.0, 8.0), dict(tilt=ramp(3, 3), cloud="cloudy")),
    "DRIFT 5 min a month": (ALPS, dict(drift=5.0)),
    "DRIFT 3 min a month, hourly": (ALPS, dict(drift=3.0, step=60)),
    "DRIFT 4 min a month, 70° N": ((70.0, 25.0, 1.0), dict(drift=4.0)),
}


def probe_towers(seeds):
    alarms, hits = 0, 0
    for seed in seeds:
        for name, ((latitude, longitude, utc_offset), settings) in TOWERS.items():
            rg = tower_rg(latitude, longitude, utc_offset, seed=seed, **settings)
            named = report(f"s{seed} {name}", rg.index, rg.to_numpy(), latitude, longitude,
                           utc_offset, settings.get("step", 30))
            hits += named and name.startswith("DRIFT")
            alarms += named and not name.startswith("DRIFT")
    return alarms, hits


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--probes", default=",".join(PROBES), help="'' for none")
    parser.add_argument("--towers", action="store_true")
    parser.add_argument("--seeds", default="1,2,3")
    args = parser.parse_args(argv)
    warnings.simplefilter("ignore")     # numpy's on all-NaN slices, pvlib's deprecations
    seeds = [int(seed) for seed in args.seeds.split(",")]
    names = [name for name in args.probes.split(",") if name]
    if names:
        print(f"clean probes: {probe_sites(names, seeds)} drift alarm(s)")
    if args.towers:
        alarms, hits = probe_towers(seeds)
        print(f"towers: {alarms} drift alarm(s) on clean cases; {hits} of {3 * len(seeds)} "
              "true drifts named")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
