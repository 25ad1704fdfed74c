"""False alarms and power of ``ustar_pairing.nee_without_ustar`` (round mistakes47).

The check names a u* column whose gaps the flux does not share (the flux and u* come from
one sonic, so a tower's own u* is missing where its NEE is). Run on each generated
site-year as it is (a call is a false alarm) and with the next site-year's u* of the same
set joined by position (a call is a hit); the invented demo's ten-year records (seed 3,
c3 and c4, 30 and 60 min) and trial site files (``--trials DIR ...``: folders of a
trial's ``--out``, every site TOML read as ``run`` reads it) as they are.

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13. Usage (about a minute, plus the trials)::

    .venv/bin/python tests/benchmarks/bench_ustar_pairing.py [--trials DIR ...]
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import ustar_pairing  # noqa: E402


def _called(frame) -> bool:
    minutes = (frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1)
    return ustar_pairing.nee_without_ustar(frame["nee"].to_numpy(dtype=float),
                                           frame["ustar"].to_numpy(dtype=float), frame.index,
                                           minutes, drivers=[
                                               frame[name].to_numpy(dtype=float)
                                               for name in ("rg", "tair")
                                               if name in frame.columns]) is not None


def _share(frame) -> float:
    """Share of the records without u* that hold NEE."""
    lost = ~(frame["ustar"].to_numpy(dtype=float) > 0)
    return float(np.isfinite(frame["nee"].to_numpy(dtype=float))[lost].mean()) if lost.any() \
        else 0.0


def _trial_frames(folders):
    from fluxpart.io import read_config
    for folder in folders:
        for toml in sorted(Path(folder).rglob("*.toml")):
            try:
                frame, _ = read_config(toml)
            except Exception as error:            # a network file or a refused site
                print(f"  {toml}: not read ({str(error).splitlines()[0][:80]})")
                continue
            if {"nee", "ustar"} <= set(frame.columns):
                yield str(toml), frame


def main(argv=None):
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    args = parser.parse_args(argv)
    sets = {}
    for name, site_year in site_years():
        sets.setdefault(name.split()[0], []).append((name, site_year.frame))
    count, false_calls, hits, shares = 0, [], 0, []
    for members in sets.values():
        for position, (name, frame) in enumerate(members):
            count += 1
            shares.append(_share(frame))
            if _called(frame):
                false_calls.append(name)
            other = members[(position + 1) % len(members)][1]
            planted = frame.copy()
            planted["ustar"] = other["ustar"].to_numpy()[:len(frame)] if len(other) >= len(
                frame) else np.resize(other["ustar"].to_numpy(), len(frame))
            hits += _called(planted)
    print(f"{count} generated site-years: false alarms {len(false_calls)} {false_calls or ''}; "
          f"another site-year's u* named {hits} of {count}; share of records without u* "
          f"holding NEE {min(shares):.2f}-{max(shares):.2f}")
    from fluxpart.demo import site_year
    for variant in ("c3", "c4"):
        for minutes in (30, 60):
            frame = site_year(3, years=10, interval_minutes=minutes, variant=variant)[0]
            print(f"demo ten years {variant} {minutes} min: "
                  f"{'CALLED' if _called(frame) else 'quiet'}")
    if args.trials:
        called, judged = [], 0
        for name, frame in _trial_frames(args.trials):
            judged += 1
            if _called(frame):
                called.append(name)
                print(f"  CALLED {name}")
        print(f"trial site files: false alarms {len(called)} of {judged}")


if __name__ == "__main__":
    main()
