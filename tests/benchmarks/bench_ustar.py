"""Benchmark: recovery of planted u* thresholds on known-truth records (30 and 60 min).

Run ``python tests/benchmarks/bench_ustar.py`` from the repository root. For each
invented site-year it runs the screening and the u* detector of
:func:`fluxpart.pipeline.screening_summary` (no bootstrap) and prints the detected
annual threshold (before the floor) against the planted one: per record, then the
median and worst relative error and the share within ±20 % for 30- and 60-minute
records, with the default settings and with the published moving point test
(``ustar_min_resolution = 0``, ``ustar_annual = "maximum"``,
``ustar_plateau_reference = 1``) side by side. The site-years are the invented demo
(grassland with 0.18 m s-1 and maize with 0.12 m s-1 planted, at 30 and 60 min; "demo
high": the grassland with 0.25 and 0.3 m s-1, where 70-80 % of the night records lie
below the threshold) and the generated archetypes of
:mod:`fluxpart.scenarios` (``--scenarios N`` seeds; fictional sites whose planted
threshold is drawn per seed). It also times :func:`fluxpart.ustar.detect_threshold` with its
100 bootstrap draws on one demo year.
"""

from __future__ import annotations

import argparse
import dataclasses
import sys
import time
from pathlib import Path

import numpy as np

_ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(_ROOT)]

from fluxpart import Config, demo, pipeline, solar, ustar  # noqa: E402

RULES = {"default": Config(ustar_bootstrap_draws=0),
         "published": Config(ustar_bootstrap_draws=0, ustar_min_resolution=0.0,
                             ustar_annual="maximum", ustar_plateau_reference=1.0)}


def _detected(frame, site, config):
    """Annual threshold before the floor, as the pipeline detects it [m s-1]."""
    _, table = pipeline.screening_summary(frame, site, config)
    return float(table.loc[table["period"] == "year", "threshold_detected"].iloc[0])


def _cases(n_scenarios, demo_seeds):
    """(category, label, minutes, planted, frame, site) per invented site-year."""
    for variant, planted, category in (("c3", 0.18, "demo"), ("c4", 0.12, "demo"),
                                       ("c3", 0.25, "demo high"), ("c3", 0.3, "demo high")):
        for minutes in (30, 60):
            for seed in demo_seeds:
                frame, _ = demo.site_year(seed, interval_minutes=minutes, variant=variant,
                                          ustar_threshold=planted)
                site = dataclasses.replace(demo.site(variant), canopy="short")
                yield (category, f"demo {variant} {planted} seed {seed}", minutes, planted, frame,
                       site)
    if n_scenarios:
        from fluxpart import scenarios

        for seed in range(n_scenarios):
            year = scenarios.generate(seed)
            yield ("generated", f"{year.scenario.archetype} seed {seed}",
                   year.scenario.interval_minutes, year.scenario.parameters["ustar_threshold"],
                   year.frame, year.site)


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scenarios", type=int, default=35,
                        help="generated site-years (fluxpart.scenarios seeds 0..N-1)")
    parser.add_argument("--demo-seeds", type=int, default=6)
    args = parser.parse_args(argv)

    rows = []
    for category, label, minutes, planted, frame, site in _cases(args.scenarios,
                                                                 range(args.demo_seeds)):
        found = {rule: _detected(frame, site, config) for rule, config in RULES.items()}
        errors = {rule: value / planted - 1.0 for rule, value in found.items()}
        rows.append((category, minutes, errors))
        print(f"{label:36s} {minutes:2d} min planted {planted:.3f} m s-1: "
              + ", ".join(f"{rule} {found[rule]:.3f} ({errors[rule]:+.1%})" for rule in RULES),
              flush=True)
    for name in ("demo", "demo high", "generated"):
        for minutes in (30, 60):
            for rule in RULES:
                error = np.array([e[rule] for c, m, e in rows if c == name and m == minutes])
                if error.size == 0:
                    continue
                print(f"{name:9s} {minutes}-min, {rule:9s}: n={error.size}, median "
                      f"{np.nanmedian(error):+.1%}, median |error| "
                      f"{np.nanmedian(np.abs(error)):.1%}, worst |error| "
                      f"{np.nanmax(np.abs(error)):.1%}, within ±20 %: "
                      f"{np.mean(np.abs(error) <= 0.2):.0%}")

    frame, _ = demo.site_year(0)
    geometry = solar.solar_geometry(frame.index, demo.site())
    night = solar.night_mask(frame["rg"].to_numpy(), geometry["potential_radiation"].to_numpy(),
                             10.0)
    start = time.perf_counter()
    ustar.detect_threshold(frame.index, frame["nee"].to_numpy(), frame["ustar"].to_numpy(),
                           frame["tair"].to_numpy(), night, demo.site().latitude, draws=100)
    print(f"detect_threshold with 100 bootstrap draws, one 30-min demo year: "
          f"{time.perf_counter() - start:.2f} s")


if __name__ == "__main__":
    main()
