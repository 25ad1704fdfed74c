"""Benchmark: the moving point test's threshold under a sharp and a gradual night loss.

Run ``python tests/benchmarks/bench_ustar_step.py [--repeats N]`` from the repository root.
A controlled experiment on invented night records of one season (no site, no pipeline):
u* log-normal (log standard deviation 0.6) with a planted threshold of 0.2 m s-1 at the
10th, 25th or 45th percentile of the night u*; air temperature uniform in 2–22 °C and a
true night NEE from Lloyd & Taylor (1994) (E0 308.56 K, T0 227.13 K, reference rate 2.5
µmol m-2 s-1 at 10 °C); below the threshold the tower measures 45 % of it (a STEP) or
(u*/u*t)^1.5 (a power RAMP reaching 100 % at the threshold, the form of
:mod:`fluxpart.scenarios`); optionally Laplace random error with a standard deviation of
0.4 + 0.15 NEE µmol m-2 s-1 (the linear form of Richardson et al. 2006). 1080 and 540
usable records stand for a season of 30- and 60-minute nights.

For each case it prints the median relative error of :func:`fluxpart.ustar.moving_point_threshold`
(default settings, no floor), the share within ±20 % and the median width of the u* class
that holds the planted threshold, relative to it: under a step, the class that holds the
threshold loses flux and fails the plateau criterion, the first class that passes lies
wholly above the threshold, and its mean u* (the threshold the test reports) lies above
it by about one class width (round ustar49, DEVELOPERS.md).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.stats import norm

_ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(_ROOT)]

from fluxpart import ustar  # noqa: E402

THRESHOLD = 0.2          # planted [m s-1]
LOG_SD = 0.6             # of night u* [1]
USTAR_CLASSES = 20       # the moving point test's default


def night_set(rng, records, quantile, loss, noise):
    """Invented night records of one season: NEE [µmol m-2 s-1], u* [m s-1], T [°C]."""
    median = THRESHOLD / np.exp(norm.ppf(quantile) * LOG_SD)
    ustar_values = median * np.exp(rng.normal(0.0, LOG_SD, records))
    tair = rng.uniform(2.0, 22.0, records)
    # Lloyd & Taylor (1994): E0 = 308.56 K, T0 = 227.13 K, Tref = 10 °C
    reco = 2.5 * np.exp(308.56 * (1.0 / 56.02 - 1.0 / (tair + 273.15 - 227.13)))
    below = ustar_values < THRESHOLD
    share = np.where(below, 0.45 if loss == "step" else (ustar_values / THRESHOLD) ** 1.5, 1.0)
    nee = reco * share
    if noise:
        nee = nee + rng.laplace(0.0, (0.4 + 0.15 * nee) / np.sqrt(2.0))
    return nee, ustar_values, tair


def class_width(ustar_values):
    """Width of the u* class (1/20 of the records) centred on the threshold, relative [1]."""
    rank = np.mean(ustar_values < THRESHOLD)
    low, high = np.quantile(ustar_values, [max(rank - 0.5 / USTAR_CLASSES, 0.0),
                                           min(rank + 0.5 / USTAR_CLASSES, 1.0)])
    return (high - low) / THRESHOLD


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=40)
    options = parser.parse_args(argv)
    rng = np.random.default_rng(49)
    print("loss  noise records pct | median error  within 20 %  class width")
    for loss in ("step", "ramp"):
        for noise in (False, True):
            for records in (1080, 540):
                for quantile in (0.10, 0.25, 0.45):
                    errors, widths = [], []
                    for _ in range(options.repeats):
                        nee, ustar_values, tair = night_set(rng, records, quantile, loss, noise)
                        seasons = pd.DataFrame({"year": np.full(records, 2023),
                                                "season": "summer"})
                        found = ustar.moving_point_threshold(
                            nee, ustar_values, tair, np.ones(records, dtype=bool), seasons,
                            min_threshold=0.0).seasonal["threshold"].iloc[0]
                        errors.append(found / THRESHOLD - 1.0)
                        widths.append(class_width(ustar_values))
                    errors = np.asarray(errors)
                    found = errors[np.isfinite(errors)]
                    print(f"{loss:5s} {'on' if noise else 'off':5s} {records:7d} {quantile:4.0%} | "
                          f"{np.median(found):+11.1%}  {np.mean(np.abs(found) <= 0.2):10.0%}  "
                          f"{np.median(widths):10.1%}  ({found.size} of {errors.size} found)")


if __name__ == "__main__":
    main()
