"""Generalisation benchmark: known-truth site-years of climates outside the seven archetypes.

Not collected by pytest (no ``test_`` prefix); prints figures and asserts nothing. The
calibration benchmark (``bench_calibration.py``) runs the archetypes of
:mod:`fluxpart.scenarios`, on which some rules were chosen. This one changes the fixed
facts of those archetypes (place, seasonal amplitude, record interval, outages) into seven
further invented climates, draws site-years from them with the same physics, and runs
:func:`fluxpart.process` with default settings: none of its site-years was seen while
choosing a rule. Per site-year it prints the annual errors, whether each stated 95 %
interval holds the truth, and the u* threshold found against the one planted.

Usage (about 3 s per site-year; one process per core at most)::

    .venv/bin/python tests/benchmarks/bench_generalisation.py --start 0 --sites 29 --csv a.csv

Variant ``seed % 7`` is drawn from scenario seed ``1000 + seed``.
"""

from __future__ import annotations

import sys
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from bench_calibration import (  # noqa: E402  (this folder)
    FLUXES,
    configured_process,
    seed_arguments,
)

from fluxpart import scenarios  # noqa: E402

_BASE = scenarios.ARCHETYPES
#: Invented climates: an archetype's ranges with some fixed facts changed.
VARIANTS = {
    "tropical_evergreen": {**_BASE["southern_woodland"], "latitude": (-3.0, 3.0),
                           "longitude": (-70.0, -50.0), "utc_offset": -4.0,
                           "t_mean": (25.0, 27.0), "t_amplitude": (0.5, 1.5),
                           "rh_mean": (78.0, 90.0)},
    "mediterranean": {**_BASE["southern_woodland"], "latitude": (37.0, 43.0),
                      "longitude": (-8.0, 15.0), "utc_offset": 1.0, "t_mean": (14.0, 17.0),
                      "t_amplitude": (7.0, 9.0), "rh_mean": (45.0, 60.0), "interval": (30, 60)},
    "boreal_hourly": {**_BASE["evergreen_needleleaf"], "latitude": (60.0, 64.0),
                      "interval": (60,), "t_mean": (-2.0, 2.0), "t_amplitude": (12.0, 15.0)},
    "north_savanna": {**_BASE["dry_savanna"], "latitude": (8.0, 14.0), "longitude": (-5.0, 20.0),
                      "utc_offset": 0.0, "interval": (30,)},
    "southern_crop": {**_BASE["c4_crop"], "latitude": (-35.0, -28.0),
                      "longitude": (-64.0, -58.0), "utc_offset": -3.0},
    "gappy_hourly": {**_BASE["temperate_deciduous"], "interval": (60,), "long_gaps": (2, 4),
                     "long_gap_days": (10, 21)},
    "polar_fen": {**_BASE["high_latitude_fen"], "latitude": (69.0, 72.0)},
}


def draw(seed: int) -> tuple[str, scenarios.Scenario]:
    """The scenario of `seed`: variant ``seed % 7`` drawn from scenario seed 1000 + seed."""
    name = list(VARIANTS)[seed % len(VARIANTS)]
    saved = dict(scenarios.ARCHETYPES)
    scenarios.ARCHETYPES.clear()
    scenarios.ARCHETYPES[name] = VARIANTS[name]   # draw() picks the only archetype there
    try:
        return name, scenarios.draw(1000 + seed)
    finally:
        scenarios.ARCHETYPES.clear()
        scenarios.ARCHETYPES.update(saved)


def generate(seed: int) -> tuple[str, scenarios.SiteYear]:
    """The site-year of `seed` (:func:`draw`, then simulated)."""
    name, scenario = draw(seed)
    return name, scenarios.generate(scenario)


def scored(site_year: scenarios.SiteYear, row: dict) -> dict:
    """Process `site_year` (defaults or ``--processing``); add its errors, coverage and u*
    found to `row`."""
    try:
        result = configured_process(site_year.frame, site_year.site)
    except Exception as error:  # noqa: BLE001 - a benchmark reports failures and goes on
        row["failure"] = f"{type(error).__name__}: {error}"[:200]
        return row
    annual = result.annual.loc[site_year.scenario.year]
    row["ustar_found"] = float(annual["ustar_threshold"])
    for column, truth_name in FLUXES.items():
        truth = float(site_year.annual_truth[truth_name])
        row[f"{column}_error"] = float(annual[column]) - truth
        row[f"{column}_relative"] = row[f"{column}_error"] / abs(truth)
        row[f"{column}_covered"] = bool(annual[f"{column}_ci95_low"] <= truth
                                        <= annual[f"{column}_ci95_high"])
        row[f"{column}_width"] = float(annual[f"{column}_ci95_high"]
                                       - annual[f"{column}_ci95_low"])
    for column in annual.index:   # every 1-sigma part, for studying how they combine
        if "_uncertainty_" in column:
            row[column] = float(annual[column])
    return row


def run_one(seed: int) -> dict:
    """Process one site-year; return its errors, coverage and u* thresholds."""
    name, site_year = generate(seed)
    return scored(site_year, {
        "seed": seed, "variant": name, "interval": site_year.scenario.interval_minutes,
        "latitude": site_year.site.latitude,
        "ustar_planted": site_year.scenario.parameters["ustar_threshold"]})


def report(run, label: str, description: str, argv=None) -> None:
    """Run `run(seed)` over the seeds of the command line; print each row and the summary.

    `label` names the row's key printed beside the seed (variant or archetype).
    """
    args = seed_arguments(description, 14, argv)
    rows = []
    for seed in range(args.start, args.start + args.sites):
        row = run(seed)
        rows.append(row)
        if "failure" in row:
            print(f"seed {seed:3d} {row[label]:<22s} FAILED {row['failure']}", flush=True)
            continue
        print(f"seed {seed:3d} {row[label]:<22s} {row['interval']} min  NEE err "
              f"{row['nee_error']:+6.1f}  " + "  ".join(
                  f"{c} {100 * row[f'{c}_relative']:+5.1f}%" for c in list(FLUXES)[1:])
              + f"  u* {row['ustar_found']:.3f}/{row['ustar_planted']:.3f}", flush=True)
    table = pd.DataFrame(rows)
    done = table[table.get("failure", pd.Series(index=table.index, dtype=object)).isna()]
    print(f"\n{len(done)} of {len(table)} site-years processed")
    for column in FLUXES:
        print(f"{column:16s} median |error| {done[f'{column}_error'].abs().median():6.1f} "
              f"worst {done[f'{column}_error'].abs().max():6.1f} g C m-2; 95 % coverage "
              f"{100 * done[f'{column}_covered'].mean():5.1f} %")
    if args.csv:
        table.to_csv(args.csv, index=False)


def main() -> None:
    report(run_one, "variant", __doc__.splitlines()[0])


if __name__ == "__main__":
    main()
