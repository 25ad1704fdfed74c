"""Reader unit checks: false refusals on correct files and catches of unit mix-ups.

Writes each known-truth site-year of :mod:`fluxpart.scenarios` (invented sites of seven
archetypes, randomised climate) as a plain CSV, reads it back with
:func:`fluxpart.io.read_table` and counts:

- correct files refused, or warned about a unit (should be 0);
- each mix-up refused: NEE in mg CO2 m-2 s-1 (÷ 22.7), VPD in kPa (÷ 10), with and
  without rh mapped, Rg in kW m-2 (÷ 1000) and in MJ m-2 per interval, tair in K, PPFD
  mapped as Rg (× 2.1);
- correct files whose clock is 2 h off (a clock error, not a unit one) refused or warned
  about a unit (should be 0: the clock check's job).

Also prints the reading time of one year of half-hourly records.

Usage (about a minute)::

    .venv/bin/python tests/benchmarks/bench_reader_checks.py --sites 14
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np

from fluxpart import scenarios
from fluxpart.errors import ImplausibleValueError
from fluxpart.io import read_table

_NAMES = ("nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh")


def _write(frame, path):
    out = frame.copy()
    out.insert(0, "stamp", frame.index.strftime("%Y-%m-%d %H:%M"))
    out.fillna(-9999).to_csv(path, index=False)


def _read(path, frame, site, with_rh=True):
    columns = {c: c for c in frame.columns if c in _NAMES and (with_rh or c != "rh")}
    return read_table(path, columns=columns, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", site=site)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=14)
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp())
    false_alarms, clock_alarms, caught, tried, seconds = 0, 0, {}, {}, []
    for seed in range(args.sites):
        year = scenarios.generate(seed)
        frame, site = year.frame, year.site
        interval_seconds = (frame.index[1] - frame.index[0]).total_seconds()
        path = folder / f"site{seed}.csv"
        _write(frame, path)
        started = time.perf_counter()
        try:
            _, report = _read(path, frame, site)
            false_alarms += any("[input.units]" in w for w in report.warnings)
        except ImplausibleValueError as error:
            false_alarms += 1
            print(f"seed {seed}: correct file refused: {error}")
        seconds.append(time.perf_counter() - started)
        mixups = {
            "nee mg CO2": ("nee", 1 / 22.7226, True),
            "vpd kPa (rh mapped)": ("vpd", 0.1, True),
            "vpd kPa (no rh)": ("vpd", 0.1, False),
            "rg kW m-2": ("rg", 1e-3, True),
            "rg MJ m-2 per interval": ("rg", interval_seconds * 1e-6, True),
            "tair K": ("tair", None, True),
            "rg is PPFD": ("rg", 2.102, True),
        }
        for hours in (-2, 2):  # a clock error must not pass for a unit error
            shifted = frame.copy()
            shifted["rg"] = shifted["rg"].shift(int(hours * 3600 / interval_seconds))
            _write(shifted, path)
            try:
                _, report = _read(path, shifted, site)
                clock_alarms += any("[input.units]" in w for w in report.warnings)
            except ImplausibleValueError as error:
                clock_alarms += 1
                print(f"seed {seed}: clock shift {hours} h refused as a unit: {error}")
        for label, (column, factor, with_rh) in mixups.items():
            wrong = frame.copy()
            wrong[column] = wrong[column] + 273.15 if factor is None else wrong[column] * factor
            _write(wrong, path)
            tried[label] = tried.get(label, 0) + 1
            try:
                _read(path, wrong, site, with_rh)
            except ImplausibleValueError:
                caught[label] = caught.get(label, 0) + 1
    print(f"correct files refused or warned: {false_alarms} of {args.sites}")
    print(f"clock-shifted files refused as units: {clock_alarms} of {2 * args.sites}")
    for label, count in tried.items():
        print(f"{label:24s} refused {caught.get(label, 0)} of {count}")
    print(f"read time per site-year: median {np.median(seconds):.2f} s")


if __name__ == "__main__":
    main()
