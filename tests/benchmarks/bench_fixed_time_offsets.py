"""False alarms and power of ``fixed_time_offsets.nee_offset_at_fixed_time`` (round mistakes49).

The check names NEE that departs from its neighbouring records with one sign at fixed
times of day (a daily analyser calibration kept as data). Run on each generated site-year
as it is (a call is a false alarm) and with an invented calibration planted (an offset of
``--offset`` µmol m-2 s-1, 3 by default, added to the measured records stamped 03:30 and
04:00, or those of ``--times``: a call is a hit), on the invented demo's ten-year records (seed 3, c3 and c4, 30
and 60 min), the two examples and trial site files (``--trials DIR ...``: folders of a
trial's ``--out``, every site TOML read as ``run`` reads it) as they are. NEE is taken
after the site flag (flagged records NaN), as preflight sees it after the range and flag
screening; night: Rg below 10 W m-2 (the run's default night threshold).

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13. Usage (about a minute, plus the trials)::

    .venv/bin/python tests/benchmarks/bench_fixed_time_offsets.py [--trials DIR ...]
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_pairing_uptake import _trial_frames, ten_year_frames  # noqa: E402
from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import fixed_time_offsets  # noqa: E402

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def _nee(frame) -> np.ndarray:
    nee = frame["nee"].to_numpy(dtype=float).copy()
    if "nee_flag" in frame.columns:
        nee[frame["nee_flag"].to_numpy() != 0] = np.nan
    return nee


def _called(frame, nee=None) -> str | None:
    minutes = int((frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1))
    with np.errstate(invalid="ignore"):
        night = frame["rg"].to_numpy(dtype=float) < 10.0
    return fixed_time_offsets.nee_offset_at_fixed_time(
        _nee(frame) if nee is None else nee, frame.index, minutes, night)


def _planted(frame, offset, times=("03:30", "04:00")) -> np.ndarray:
    nee = _nee(frame)
    hours = frame.index.strftime("%H:%M")
    return np.where(np.isin(hours, list(times)), nee + offset, nee)


def main(argv=None):
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    parser.add_argument("--offset", type=float, default=3.0)
    # records (interval starts) the offset is planted in: 06:00 lies in windows across
    # sunrise for much of the year at most of the site-years (round leftovers52)
    parser.add_argument("--times", default="03:30,04:00")
    args = parser.parse_args(argv)
    times = tuple(args.times.split(","))
    count, false_calls, hits = 0, [], 0
    for name, site_year in site_years():
        frame = site_year.frame
        count += 1
        if _called(frame):
            false_calls.append(name)
        hits += _called(frame, _planted(frame, args.offset, times)) is not None
    print(f"{count} generated site-years: false alarms {len(false_calls)} "
          f"{false_calls or ''}; a calibration of {args.offset:+g} at {', '.join(times)} "
          f"named {hits} of {count}")
    for variant, minutes, frame in ten_year_frames():
        print(f"demo ten years {variant} {minutes} min: "
              f"{'CALLED' if _called(frame) else 'quiet'}")
    files = list(_trial_frames([EXAMPLES, *args.trials]))
    called = [name for name, frame in files if _called(frame)]
    print("".join(f"  CALLED {name}\n" for name in called), end="")
    judged = len(files)
    print(f"examples and trial site files: false alarms {len(called)} of {judged}")


if __name__ == "__main__":
    main()
