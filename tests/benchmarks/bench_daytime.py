"""Benchmark of daytime partitioning: time per site-year, and the batched fit vs SciPy.

Run: ``cd /work/main && .venv/bin/python tests/benchmarks/bench_daytime.py``.
Not collected by pytest (no ``test_`` prefix). Prints figures; asserts nothing.
The data are the invented known-truth records of tests/test_daytime.py. Three
variants per record: E0 supplied (the light-response fit alone), E0 estimated from
night data per window (the default), and that plus weighting by a random-error
model (two passes).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import scipy
from scipy.optimize import least_squares

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from test_daytime import E0_TRUE, _inputs, _synthetic_record  # noqa: E402

from fluxpart.partition.daytime import partition_daytime  # noqa: E402
from fluxpart.responses import (  # noqa: E402
    light_response,
    light_response_derivatives,
    lloyd_taylor,
)

REPEATS = 5


def _best_time(function, repeats=REPEATS):
    best = np.inf
    for _ in range(repeats):
        start = time.perf_counter()
        out = function()
        best = min(best, time.perf_counter() - start)
    return best, out


def _scipy_per_window(record, parameters):
    """The same windows fitted one by one with scipy.optimize.least_squares (analytic jac)."""
    days = np.asarray((record["index"] - record["index"][0].normalize()) / pd.Timedelta(days=1))
    usable = (~record["is_night"] & np.isfinite(record["nee_measured"]) & (record["rg"] > 0))
    origin = record["index"][0].normalize()
    starts = np.asarray((parameters.window_start - origin) / pd.Timedelta(days=1))
    ends = np.asarray((parameters.window_end - origin) / pd.Timedelta(days=1))
    fitted = 0
    for start, end in zip(starts, ends, strict=True):
        take = usable & (days >= start) & (days < end)
        if take.sum() < 10:
            continue
        rg, vpd = record["rg"][take], record["vpd"][take]
        factor = lloyd_taylor(record["temperature"][take], 1.0, E0_TRUE)
        nee = record["nee_measured"][take]

        def residual(theta, rg=rg, vpd=vpd, factor=factor, nee=nee):
            return theta[3] * factor - light_response(rg, vpd, *theta[:3]) - nee

        def jacobian(theta, rg=rg, vpd=vpd, factor=factor):
            d_alpha, d_beta0, d_k = light_response_derivatives(rg, vpd, *theta[:3])
            return np.column_stack([-d_alpha, -d_beta0, -d_k, factor])

        least_squares(residual, [0.01, 20.0, 0.0, 2.0], jac=jacobian, method="trf",
                      bounds=([0, 0, 0, 0], [0.22, 250, np.inf, np.inf]))
        fitted += 1
    return fitted


def main():
    print(f"daytime partitioning benchmark (numpy {np.__version__}, scipy {scipy.__version__},"
          f" best of {REPEATS})")
    cases = [
        ("site-year, 30 min", dict(freq="30min"), 1.0),
        ("site-year, 60 min", dict(freq="60min"), 1.0),
        ("site-year, C4-like, 30 min", dict(c4=True), 1.0),
        ("3 site-years, 30 min", dict(days=1096), 1096 / 365),
    ]
    variants = {
        "E0 supplied": lambda inputs: partition_daytime(**inputs),
        "E0 from night": lambda inputs: partition_daytime(
            **{k: v for k, v in inputs.items() if k != "e0"}),
        "E0 from night, weighted": lambda inputs: partition_daytime(
            **{k: v for k, v in inputs.items() if k != "e0"},
            random_error=lambda nee: 0.6 + 0.15 * np.abs(nee)),
    }
    for label, options, years in cases:
        record = _synthetic_record(0, **options)
        for variant, run in variants.items():
            seconds, result = _best_time(lambda record=record, run=run: run(_inputs(record)))
            windows = result.parameters
            gpp = np.nansum(result.gpp) / np.sum(record["gpp_true"]) - 1
            reco = np.nansum(result.reco) / np.sum(record["reco_true"]) - 1
            shares = windows.status.value_counts(normalize=True)
            print(f"{label:27s} {variant:24s} {seconds * 1e3:7.1f} ms = "
                  f"{seconds / years * 1e3:6.1f} ms/site-year; {len(windows)} windows, "
                  f"{shares.get('accepted', 0):.0%} accepted, {shares.get('replaced', 0):.0%} "
                  f"replaced; GPP {gpp:+.1%}, Reco {reco:+.1%}")
    record = _synthetic_record(0)
    batched, result = _best_time(lambda: partition_daytime(**_inputs(record)))
    single, fitted = _best_time(lambda: _scipy_per_window(record, result.parameters), repeats=2)
    print(f"scipy.optimize.least_squares per window (trf, analytic jac): {single * 1e3:.1f} ms "
          f"for {fitted} windows; batched fit incl. interpolation {batched * 1e3:.1f} ms "
          f"({single / batched:.1f}x faster)")


if __name__ == "__main__":
    main()
