"""Benchmark of the uncertainty budget: Monte Carlo time and memory, and the demo's figures.

Run: ``cd /work/main && /work/venv/bin/python tests/benchmarks/bench_uncertainty.py``.
Not collected by pytest (no ``test_`` prefix). Prints figures; asserts nothing.
Data: the invented demo site (fluxpart.demo), processed once with the default settings.
"""

from __future__ import annotations

import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from fluxpart import demo  # noqa: E402
from fluxpart.audit import audit_trail  # noqa: E402
from fluxpart.pipeline import process  # noqa: E402
from fluxpart.uncertainty import (  # noqa: E402
    carbon_accounting_units,
    monte_carlo_sums,
    timeseries_random_error,
    uncertainty_budget,
)

REPEATS = 3


def _best_time(function, repeats=REPEATS):
    best, out = np.inf, None
    for _ in range(repeats):
        start = time.perf_counter()
        out = function()
        best = min(best, time.perf_counter() - start)
    return best, out


def _peak_mib(function) -> float:
    tracemalloc.start()
    function()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def main() -> None:
    frame, _ = demo.site_year(seed=0)
    result = process(frame, demo.site())
    timeseries = result.timeseries

    seconds, (sigma, model) = _best_time(lambda: timeseries_random_error(timeseries))
    print(f"random error model (pairs + fit + per-record sigma), one site-year: "
          f"{seconds * 1e3:.1f} ms")
    print(model.coefficients[["intercept", "slope", "pairs", "bins"]].to_string())

    index = timeseries.index
    seconds, sums = _best_time(lambda: monte_carlo_sums(sigma, index, 30, draws=500, seed=0))
    row = sums.loc[2021]
    print(f"\nMonte Carlo, 500 draws x {len(index)} records: {seconds:.3f} s, peak "
          f"{_peak_mib(lambda: monte_carlo_sums(sigma, index, 30, draws=500)):.0f} MiB")
    print(f"demo 2021 random uncertainty of NEE: MC sd {row['random_sd']:.3f} g C m-2, "
          f"analytic {row['analytic_sd']:.3f} g C m-2, ratio MC/analytic "
          f"{row['random_sd'] / row['analytic_sd']:.3f}; 95 % interval "
          f"[{row['random_percentile_2_5']:.2f}, {row['random_percentile_97_5']:.2f}]")
    ratios = [monte_carlo_sums(sigma, index, 30, draws=500, seed=s).loc[2021, "random_sd"]
              / row["analytic_sd"] for s in range(10)]
    print(f"MC/analytic over seeds 0-9 (500 draws): {min(ratios):.3f} to {max(ratios):.3f} "
          f"(expected spread ±{1 / np.sqrt(1000):.3f} per 1 s.e.)")

    ten_index = pd.date_range("2011-01-01", "2020-12-31 23:30", freq="30min")
    ten_sigma = np.resize(sigma, len(ten_index))
    seconds, _ = _best_time(lambda: monte_carlo_sums(ten_sigma, ten_index, 30, draws=500),
                            repeats=1)
    peak = _peak_mib(lambda: monte_carlo_sums(ten_sigma, ten_index, 30, draws=500))
    print(f"Monte Carlo, 500 draws x {len(ten_index)} records (10 years): {seconds:.2f} s, "
          f"peak {peak:.0f} MiB (unchunked would need "
          f"{500 * len(ten_index) * 8 / 2**20:.0f} MiB)")

    budget = uncertainty_budget(result.annual, sums)
    units = carbon_accounting_units(result.annual.join(budget))
    print("\ndemo 2021 uncertainty budget [g C m-2]:")
    print(budget.T.to_string(float_format=lambda v: f"{v:9.2f}"))
    print(units.T.to_string(float_format=lambda v: f"{v:9.4f}"))

    seconds, _ = _best_time(lambda: audit_trail(timeseries))
    print(f"\naudit trail of one site-year: {seconds * 1e3:.1f} ms")


if __name__ == "__main__":
    main()
