"""Spread of the annual NEE gap-filling part over placements of the artificial gaps.

The gap-filling part of the NEE interval (``nee_uncertainty_gapfill``) is estimated
from one random set of artificial gaps (:func:`fluxpart.uncertainty.artificial_gap_errors`,
placed by :func:`fluxpart.uncertainty.artificial_gap_seed`). This benchmark processes
each generated site-year once, then re-estimates the part for placement seeds
0 … P−1 (a fresh set of artificial gaps and :func:`~fluxpart.uncertainty.gapfill_error_model`
each, the rest of the pipeline held) and prints, per site-year, the spread of the part,
of its fill-bias term and of the total σ over the seeds, with the candidate bias terms:

- ``positive``: max(B² − S², 0) (the default; B the fill bias of the year, S its standard error);
- ``posterior``: B² + S² (the mean of (Nμ)² given B under a flat prior on the bias);
- ``none``: no bias term.

``--demo`` takes the demo site's years (:func:`fluxpart.demo.site_year`) in place of
``scenarios``. ``--rounds`` sets the rounds of artificial gaps (default: the library's). Known-truth
coverage of each candidate over all (site-year, seed) pairs is printed at the end.

Usage (one gap fill per round and seed; run at nice on a shared machine)::

    .venv/bin/python tests/benchmarks/bench_gap_seeds.py --start 0 --sites 10 --placements 8
"""

from __future__ import annotations

import argparse
import dataclasses
import time

import numpy as np
import pandas as pd

import fluxpart
from fluxpart import demo, scenarios, uncertainty
from fluxpart.constants import CARBON_MOLAR_MASS

Z95 = 1.959964
BIAS_TERMS = {
    "positive": lambda b, s: np.maximum(b * b - s * s, 0.0),
    "posterior": lambda b, s: b * b + s * s,
    "none": lambda b, s: 0.0 * b,
}


def captured_run(frame, site):
    """Process a site-year; return the result and the captured gap-error and annual-part calls."""
    calls = {}
    gap_errors, period = uncertainty.artificial_gap_errors, uncertainty.period_uncertainty

    def keep_gap_errors(*args, **kwargs):
        calls["gap"] = (args, kwargs)
        return gap_errors(*args, **kwargs)

    def keep_period(*args, **kwargs):
        calls["period"] = (args, kwargs)          # the last call is the annual one
        return period(*args, **kwargs)

    uncertainty.artificial_gap_errors = keep_gap_errors
    uncertainty.period_uncertainty = keep_period
    try:
        result = fluxpart.process(frame, site)
    finally:
        uncertainty.artificial_gap_errors, uncertainty.period_uncertainty = gap_errors, period
    return result, calls


def site_year_of(seed: int, use_demo: bool):
    """A generated site-year (``scenarios``) or the demo site's year of `seed`:
    (frame, site, year, true annual NEE [g C m-2])."""
    if use_demo:
        frame, truth = demo.site_year(seed)
        year = int(frame.index[0].year)
        # µmol m-2 s-1 over half-hours to g C m-2: M_C [g mol-1] × 1e-6 mol µmol-1 × 1800 s
        grams = CARBON_MOLAR_MASS * 1e-6 * 1800.0
        return frame, demo.site(), year, float(truth["nee"].sum() * grams)
    generated = scenarios.generate(seed)
    return (generated.frame, generated.site, generated.scenario.year,
            float(generated.annual_truth["nee"]))


def placements(seed: int, count: int, rounds: int | None, use_demo: bool = False) -> pd.DataFrame:
    """One row per placement seed: the year's gap-filling part, its bias B and S, and σ."""
    frame, site, year, true_nee = site_year_of(seed, use_demo)
    result, calls = captured_run(frame, site)
    annual = result.annual.loc[year]
    (gap_args, gap_kwargs), (period_args, period_kwargs) = calls["gap"], calls["period"]
    inputs, keys, interval = period_args
    rows = []
    for placement in range(count):
        started = time.process_time()
        settings = {**gap_kwargs, "seed": placement}
        if rounds is not None:
            settings["rounds"] = rounds
        # as the pipeline: the length classes of the long gaps need the records per day
        model = uncertainty.gapfill_error_model(
            uncertainty.artificial_gap_errors(*gap_args, **settings),
            records_per_day=settings.get("records_per_day"))
        parts = uncertainty.period_uncertainty(dataclasses.replace(inputs, gapfill_model=model),
                                               keys, interval, **period_kwargs).loc[year]
        gapfill, bias, bias_se = (float(parts[c]) for c in (
            "nee_uncertainty_gapfill", "nee_uncertainty_gapfill_bias",
            "nee_uncertainty_gapfill_bias_se"))
        rest = gapfill ** 2 - float(BIAS_TERMS["positive"](bias, bias_se))
        row = {"seed": seed, "placement": placement, "cpu": time.process_time() - started,
               "rest": np.sqrt(max(rest, 0.0)), "bias": bias, "bias_se": bias_se,
               "error": float(annual["nee"]) - true_nee}
        others = float(annual["nee_uncertainty_random"]) ** 2 \
            + float(np.nan_to_num(annual["nee_uncertainty_ustar"])) ** 2
        for name, term in BIAS_TERMS.items():
            part = np.sqrt(max(rest, 0.0) + float(term(bias, bias_se)))
            row[f"gapfill_{name}"] = part
            row[f"sigma_{name}"] = np.sqrt(others + part ** 2)
        rows.append(row)
    return pd.DataFrame(rows)


def spread(table: pd.DataFrame) -> pd.DataFrame:
    """Per site-year: min, max and max/min of σ and of the parts over the placements."""
    columns = ["rest", "gapfill_positive", "sigma_positive", "gapfill_posterior",
               "sigma_posterior", "sigma_none"]
    grouped = table.groupby("seed")[columns]
    out = grouped.min().add_suffix("_min").join(grouped.max().add_suffix("_max"))
    for column in columns:
        out[f"{column}_ratio"] = out[f"{column}_max"] / out[f"{column}_min"]
    out["bias_on"] = table.assign(on=table["bias"].abs() > table["bias_se"]).groupby("seed")["on"].mean()
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--start", type=int, default=0)
    parser.add_argument("--sites", type=int, default=10)
    parser.add_argument("--placements", type=int, default=8)
    parser.add_argument("--rounds", type=int, default=None)
    parser.add_argument("--csv", default=None)
    parser.add_argument("--demo", action="store_true",
                        help="the demo site's years (fluxpart.demo.site_year) instead of scenarios")
    options = parser.parse_args()
    table = pd.concat([placements(seed, options.placements, options.rounds, options.demo)
                       for seed in range(options.start, options.start + options.sites)],
                      ignore_index=True)
    if options.csv:
        table.to_csv(options.csv, index=False)
    summary = spread(table)
    with pd.option_context("display.width", 200, "display.max_columns", 40,
                           "display.float_format", "{:.2f}".format):
        print(summary[[c for c in summary.columns if c.endswith("_ratio")] + ["bias_on"]])
        print("median max/min over site-years: "
              + ", ".join(f"{c[:-6]} {summary[c].median():.2f}"
                          for c in summary.columns if c.endswith("_ratio")))
        for name in BIAS_TERMS:
            sigma = table[f"sigma_{name}"]
            covered = (table["error"].abs() <= Z95 * sigma).mean()
            by_site = sigma.groupby(table["seed"])
            print(f"{name:9s}: coverage {100 * covered:.1f} %, mean width "
                  f"{2 * Z95 * sigma.mean():.1f} g C m-2, median |error|/σ "
                  f"{(table['error'].abs() / sigma).median():.2f}, "
                  f"median within-site CV of σ {(by_site.std() / by_site.mean()).median():.3f}")
        print(f"CPU per placement {table['cpu'].mean():.2f} s")


if __name__ == "__main__":
    main()
