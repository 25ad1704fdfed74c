"""Outage benchmark: is the annual NEE interval honest about weeks without any sensor?

Not collected by pytest (no ``test_`` prefix); prints figures and asserts nothing.
INVENTED DATA: every site-year is drawn by :mod:`fluxpart.scenarios` (fictional sites).

Into each generated known-truth site-year (on top of the generator's own gaps) it cuts one
outage of every sensor (NEE, Rg, Tair, VPD, RH, Tsoil and u* all missing) of 14–21 days at
a random start, as a tower loses power for weeks, then runs :func:`fluxpart.process` with
default settings and compares the annual NEE with the truth: per site-year the error, the
stated 1-sigma total and the error in sigmas, and at the end the share of site-years whose
stated 95 % interval (± 1.96 σ) holds the truth (it should be near 95 %) and the median
|error|/σ (0.67 for a calibrated normal error; smaller: intervals wider than needed).

The outage's length and start come from a generator seeded by the site-year's seed, so
a run is repeatable. Usage (about 3 s per site-year)::

    .venv/bin/python tests/benchmarks/bench_outages.py --start 100 --sites 24
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import fluxpart  # noqa: E402
from fluxpart import scenarios  # noqa: E402

#: Variables an outage of the whole station removes.
STATION = ("nee", "rg", "tair", "vpd", "rh", "tsoil", "ustar")
#: Outage lengths drawn from [14, 22) days: the "2–3 week gaps" of a powered-down tower.
DAYS = (14, 22)


def with_outage(frame: pd.DataFrame, seed: int) -> tuple[pd.DataFrame, pd.Timestamp, int]:
    """`frame` with one outage of every sensor; its first record and length [days]."""
    rng = np.random.default_rng([seed, 2026])
    per_day = int(round(pd.Timedelta(days=1) / (frame.index[1] - frame.index[0])))
    days = int(rng.integers(*DAYS))
    start = int(rng.integers(0, len(frame) - days * per_day))
    out = frame.copy()
    columns = [out.columns.get_loc(name) for name in STATION if name in out.columns]
    out.iloc[start:start + days * per_day, columns] = np.nan
    return out, frame.index[start], days


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--start", type=int, default=100, help="first scenario seed")
    parser.add_argument("--sites", type=int, default=24, help="number of site-years")
    arguments = parser.parse_args(argv)
    z = []
    print("seed archetype                outage          NEE error  sigma  error/sigma")
    for seed in range(arguments.start, arguments.start + arguments.sites):
        site_year = scenarios.generate(seed)
        frame, start, days = with_outage(site_year.frame, seed)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            annual = fluxpart.process(frame, site_year.site).annual.iloc[0]
        error = float(annual["nee"] - site_year.annual_truth["nee"])
        sigma = float(annual["nee_uncertainty_total"])
        z.append(error / sigma)
        print(f"{seed:4d} {site_year.scenario.archetype:24s} {start:%m-%d} {days:2d} days "
              f"{error:+9.1f} {sigma:6.1f} {z[-1]:+8.2f}", flush=True)
    z = np.abs(np.array(z))
    print(f"{len(z)} site-years: 95 % interval holds the truth in {100 * np.mean(z < 1.96):.1f} %;"
          f" median |error|/sigma {np.median(z):.2f}; worst {z.max():.2f}")


if __name__ == "__main__":
    main()
