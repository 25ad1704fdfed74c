"""False alarms of ``night_threshold.dark_as_day`` on generated site-years (round mistakes43).

Each site-year's Rg at the default ``night_rg_threshold`` (10 W m-2) and at 0.01 and 1
(a threshold in kW m-2, one inside the noise): the share of the deep-night records
(sun 12 degrees or more below the horizon) reaching it, and whether the rule names it.

    PYTHONPATH=$PWD python tests/benchmarks/bench_dark_as_day.py [--seeds 40]
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from fluxpart import scenarios, solar  # noqa: E402
from fluxpart.night_threshold import DEEP_NIGHT_ELEVATION, dark_as_day  # noqa: E402

THRESHOLDS = (10.0, 1.0, 0.01)


def judged(frame, site, minutes):
    index = pd.DatetimeIndex(frame.index)
    elevation = solar.interval_midpoint_elevation(index, site.latitude, site.longitude,
                                                  site.utc_offset, minutes)
    rg = frame["rg"].to_numpy(dtype=float)
    deep = (elevation <= DEEP_NIGHT_ELEVATION) & np.isfinite(rg)
    return [(float((rg[deep] >= t).mean()) if deep.any() else float("nan"),
             bool(dark_as_day(rg, elevation, t))) for t in THRESHOLDS]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--seeds", type=int, default=40)
    parser.add_argument("--other", type=int, default=14)
    args = parser.parse_args(argv)
    import bench_generalisation
    import bench_other_physics
    sets = ([(f"scenarios {s}", lambda s=s: scenarios.generate(s)) for s in range(args.seeds)]
            + [(f"generalisation {s}", lambda s=s: bench_generalisation.generate(s)[1])
               for s in range(args.other)]
            + [(f"other physics {s}", lambda s=s: bench_other_physics.generate(s))
               for s in range(args.other)])
    named = np.zeros(len(THRESHOLDS), dtype=int)
    for name, make in sets:
        year = make()
        rows = judged(year.frame, year.site, year.scenario.interval_minutes)
        named += [flag for _, flag in rows]
        print(name, " ".join(f"{t:g}: {share:.3f}{' NAMED' if flag else ''}"
                             for t, (share, flag) in zip(THRESHOLDS, rows, strict=True)), flush=True)
    print("named of", len(sets), dict(zip(THRESHOLDS, named.tolist(), strict=True)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
