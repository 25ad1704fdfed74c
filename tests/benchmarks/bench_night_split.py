"""Nighttime GPP and Reco errors of generated site-years split by record kind (a benchmark script).

INVENTED DATA: the known-truth site-years of ``bench_calibration.py`` (``cal:SEED``,
:func:`fluxpart.scenarios.generate`), ``bench_generalisation.py`` (``gen:SEED``) and
``bench_other_physics.py`` (``oth:SEED``; fictional sites). Each is processed with default
settings and its annual nighttime-method error [% of the true annual sum] is split over its
records against the generator's per-record truth:

- ``Rnm`` / ``Rnf`` / ``Rdm`` / ``Rdf``: Reco error of night or day records, measured or
  filled NEE (night: the run's night mask; measured: ``nee_measured`` kept);
- ``Gdm`` / ``Gdf`` / ``Gn``: the same for GPP (day measured, day filled, night);
- ``R1``–``R4``: Reco error by quarter of the calendar year;
- ``E0``: the year's fitted E0 [K], ``E0*``: the planted E0 (Lloyd–Taylor truth) or, for a
  constant-Q10 truth, the Lloyd–Taylor E0 of the same sensitivity at the mean driving
  temperature of the night records, ``E0* = ln(Q10) / 10 K (T + 46.02 K)²`` (equal
  d ln R / dT; Lloyd & Taylor 1994, eq. 11 with T0 = 227.13 K);
- ``fit`` / ``set``: annual Reco error [%] with the Lloyd–Taylor form alone on the PLANTED
  temperature, Rref refitted in the run's 4-day windows (:func:`fluxpart.partition.nighttime.
  fit_rref_windows`, low-light rule as in the run) with the fitted E0 and with ``E0*``, each
  with its day-record part: what the E0 estimate and what the temperature chosen carry.

Not collected by pytest; prints figures and asserts nothing. About 3–4 s per site-year::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_night_split.py \
        cal:25 gen:16 oth:22 [--csv FILE]

Figures: DEVELOPERS.md, changelog "Unreleased: nightpart53".

References
----------
Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8:315–323. doi:10.2307/2389824

Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into assimilation
and ecosystem respiration: review and improved algorithm. Global Change Biology
11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import bench_generalisation  # noqa: E402  (this folder)
import bench_other_physics  # noqa: E402  (this folder)

import fluxpart  # noqa: E402
from fluxpart import scenarios  # noqa: E402
from fluxpart.config import Config  # noqa: E402
from fluxpart.constants import KELVIN_OFFSET, LLOYD_TAYLOR_T0_KELVIN  # noqa: E402
from fluxpart.partition import nighttime  # noqa: E402
from fluxpart.responses import lloyd_taylor  # noqa: E402

#: g C m-2 per µmol CO2 m-2 s-1 and second (12.011 g C per mol).
_GRAMS = 12.011e-6


def site_year(key: str):
    """The site-year of ``cal:SEED``, ``gen:SEED`` or ``oth:SEED``, and its constant Q10
    (None where the truth is Lloyd–Taylor)."""
    kind, seed = key.split(":")
    seed = int(seed)
    if kind == "cal":
        return scenarios.generate(seed), None
    if kind == "gen":
        return bench_generalisation.generate(seed)[1], None
    if kind == "oth":
        drawn = scenarios.draw(seed)
        rng = np.random.default_rng(np.random.SeedSequence([drawn.seed, 104729, 31]).spawn(3)[2])
        q10 = bench_other_physics._physics(rng, drawn.archetype)["q10"]
        return bench_other_physics.generate(seed), q10
    raise SystemExit(f"error: site-year {key!r}: expected cal:SEED, gen:SEED or oth:SEED")


def planted_e0(site, q10, night_temperature) -> float:
    """The planted E0 [K], or the Lloyd–Taylor E0 of a constant Q10's sensitivity at the
    mean night temperature [°C] (equal d ln R / dT)."""
    if q10 is None:
        return float(site.scenario.parameters["e0"])
    t0 = LLOYD_TAYLOR_T0_KELVIN - KELVIN_OFFSET
    return float(np.log(q10) / 10.0 * (np.nanmean(night_temperature) - t0) ** 2)


def refitted_reco(ts, driver, e0, config) -> np.ndarray:
    """Lloyd–Taylor Reco [µmol m-2 s-1] on `driver` with E0 fixed at `e0`, Rref refitted in
    the run's windows on its measured night NEE."""
    night = ts["is_night"].to_numpy(dtype=bool)
    windows = nighttime.fit_rref_windows(
        ts.index, ts["nee_measured"].to_numpy(dtype=float), ts[driver].to_numpy(dtype=float),
        night, np.full(len(ts), e0), rref_window_days=config.rref_window_days,
        rref_min_points=config.rref_min_points, rg=ts["rg"].to_numpy(dtype=float),
        low_light_rg=config.rref_low_light_rg)
    rref = nighttime.rref_per_record(ts.index, windows)
    return lloyd_taylor(ts[f"{driver}_filled"].to_numpy(dtype=float), rref, e0)


def split(key: str) -> dict:
    """The error parts of one site-year (see the module docstring)."""
    site, q10 = site_year(key)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = fluxpart.process(site.frame, site.site)
    ts = result.timeseries
    grams = (ts.index[1] - ts.index[0]).total_seconds() * _GRAMS
    truth = site.truth.reindex(ts.index)
    in_year = ts.index.year == site.scenario.year
    night = ts["is_night"].to_numpy(dtype=bool)
    measured = ts["nee_measured"].notna().to_numpy()
    reco_true, gpp_true = float(site.annual_truth["reco"]), float(site.annual_truth["gpp"])
    reco_error = np.where(in_year, ts["reco_nighttime"] - truth["reco"], np.nan) * grams
    gpp_error = np.where(in_year, ts["gpp_nighttime"] - truth["gpp"], np.nan) * grams
    driver = site.scenario.parameters["driver"]
    chosen = result.provenance.get("respiration_driver", {}).get("chosen", "?")
    e0 = float(result.parameters["nighttime_e0_annual"]["e0"].iloc[0])
    e0_star = planted_e0(site, q10, ts[driver].to_numpy(dtype=float)[night])
    row = {"site": key, "kind": site.scenario.archetype, "lat": site.site.latitude,
           "planted": driver, "chosen": chosen, "q10": q10,
           "gap": float(site.frame["nee"].isna().mean()), "E0": e0, "E0*": e0_star,
           "GPP": 100 * np.nansum(gpp_error) / gpp_true,
           "Reco": 100 * np.nansum(reco_error) / reco_true}
    for name, mask in (("Rnm", night & measured), ("Rnf", night & ~measured),
                       ("Rdm", ~night & measured), ("Rdf", ~night & ~measured)):
        row[name] = 100 * np.nansum(reco_error[mask]) / reco_true
    for name, mask in (("Gdm", ~night & measured), ("Gdf", ~night & ~measured), ("Gn", night)):
        row[name] = 100 * np.nansum(gpp_error[mask]) / gpp_true
    quarter = ts.index.quarter.to_numpy()
    for q in range(1, 5):
        row[f"R{q}"] = 100 * np.nansum(reco_error[quarter == q]) / reco_true
    config = result.config if isinstance(result.config, Config) else Config()
    for name, value in (("fit", e0), ("set", e0_star)):
        error = np.where(in_year, refitted_reco(ts, driver, value, config) - truth["reco"],
                         np.nan) * grams
        row[name] = 100 * np.nansum(error) / reco_true
        row[name + "_day"] = 100 * np.nansum(error[~night]) / reco_true
    return row


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("sites", nargs="+", help="cal:SEED, gen:SEED or oth:SEED")
    parser.add_argument("--csv", default=None)
    args = parser.parse_args(argv)
    rows = []
    for key in args.sites:
        rows.append(split(key))
        with pd.option_context("display.width", 250, "display.max_columns", 40):
            print(pd.DataFrame(rows[-1:]).round(1).to_string(index=False, header=len(rows) == 1),
                  flush=True)
    if args.csv:
        pd.DataFrame(rows).to_csv(args.csv, index=False)
    return 0


if __name__ == "__main__":
    sys.exit(main())
