"""Nighttime Reco and GPP intervals by part: which part sets the width, which are needed.

Reads the per-site-year CSV files that ``bench_calibration.py``, ``bench_generalisation.py``
and ``bench_other_physics.py`` write with ``--csv`` (each holds every 1-sigma part of the
annual uncertainty) and prints, per file and for nighttime Reco and nighttime GPP:

- coverage of the stated 95 % interval, median |error| / sigma (0.67 for a calibrated
  normal error) and its 95th percentile (1.96), median half-width [% of the truth];
- each part's mean share of the variance sigma² per site-year and how often it is the
  largest part;
- coverage and median width (relative to the stated one) with each part left out, and
  with sigma scaled by 0.7 and 1.5.

The parts are those :func:`fluxpart.uncertainty_parts.uncertainty_parts` shows (the root
sum of their squares is the stated sigma; the script checks it). Not collected by pytest;
prints figures and asserts nothing. Usage::

    OMP_NUM_THREADS=1 .venv/bin/python tests/benchmarks/bench_calibration.py --sites 70 --csv cal.csv
    .venv/bin/python tests/benchmarks/bench_night_parts.py cal.csv gen.csv oth.csv

A calibrated 95 % interval holds the truth in 95 % of site-years; the issue's band is
85–99 % (issue 11).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from fluxpart.uncertainty_parts import PART_LABELS, uncertainty_parts  # noqa: E402

#: z of a two-sided 95 % interval of a normal error (the stated interval's factor).
Z95 = 1.96


def _sigmas(table: pd.DataFrame, flux: str) -> pd.DataFrame:
    """The 1-sigma parts of `flux`'s total, one column per part it takes [g C m-2]
    (:func:`fluxpart.uncertainty_parts.uncertainty_parts`, one row per site-year)."""
    parts = uncertainty_parts(table.reset_index(drop=True)).xs(flux, level="flux")
    return parts[list(PART_LABELS)].dropna(axis=1, how="all").set_axis(table.index)


def _coverage(error: pd.Series, sigma: pd.Series) -> float:
    """Share of site-years with |error| <= 1.96 sigma [%]."""
    return float(100 * (error.abs() <= Z95 * sigma).mean())


def summarise(table: pd.DataFrame, flux: str) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The interval's figures and the parts' figures of `flux` in `table`."""
    if "failure" in table.columns:
        table = table[table["failure"].isna()]
    error = table[f"{flux}_error"].astype(float)
    truth = (error / table[f"{flux}_relative"].astype(float)).abs()
    parts = _sigmas(table, flux)
    squares = parts.fillna(0.0) ** 2
    sigma = np.sqrt(squares.sum(axis=1))
    stated = table[f"{flux}_uncertainty_total"].astype(float)
    z = (error / sigma).abs()
    head = pd.DataFrame([{
        "site_years": len(table), "coverage_%": _coverage(error, sigma),
        "median_|z|": z.median(), "p95_|z|": z.quantile(0.95),
        "median_halfwidth_%": float((100 * Z95 * sigma / truth).median()),
        "sigma_check": float((sigma - stated).abs().max()),
        **{f"coverage_x{k}_%": _coverage(error, k * sigma) for k in (0.7, 1.5)}}])
    share = squares.div(squares.sum(axis=1), axis=0)
    largest = squares.idxmax(axis=1)
    rows = []
    for part in parts.columns:
        without = np.sqrt(squares.drop(columns=part).sum(axis=1))
        rows.append({"part": part, "mean_share_of_variance_%": float(100 * share[part].mean()),
                     "largest_in_%": float(100 * (largest == part).mean()),
                     "coverage_without_%": _coverage(error, without),
                     "median_width_without": float((without / sigma).median())})
    return head, pd.DataFrame(rows).set_index("part")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("csv", nargs="+", help="per-site-year CSV of a benchmark (--csv)")
    parser.add_argument("--flux", nargs="+", default=["reco_nighttime", "gpp_nighttime"])
    args = parser.parse_args(argv)
    with pd.option_context("display.float_format", "{:.2f}".format, "display.width", 160):
        for path in args.csv:
            table = pd.read_csv(path)
            for flux in args.flux:
                head, parts = summarise(table, flux)
                print(f"== {path}: {flux}")
                print(head.to_string(index=False))
                print(parts.to_string(), "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
