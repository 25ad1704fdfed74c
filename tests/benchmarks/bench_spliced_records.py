"""False alarms and power of the spliced-records check (round mistakes44).

``spliced_records.spliced_records`` (a stretch of another file's records pasted into the
record, named by joint steps of the soil and air temperature) is run on each generated
site-year as it is (a call is a false alarm) and with the mistake planted (a call is a
hit): the 7th calendar month of the next site-year of the same set and interval pasted
over the same stamps (every column; another tower's file joined to fill an outage), and
that month's fluxes alone (a neighbour's NEE with the site's own weather kept, which the
check cannot see and does not claim to).

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13; the invented Quillmoor demo's ten-year records (c3
and c4, 30 and 60 min). Usage (about a minute)::

    .venv/bin/python tests/benchmarks/bench_spliced_records.py

Round mistakes44 (2026-12-05): false alarms 0 of 68 and 0 of the four ten-year demo
records; the next site-year's July pasted named in 41 of 68 (49 with the soil's step
factor at 3, which named 3 site configs of trial seventeenth).

Round mistakes51: ``spliced_records.file_joint`` (a lone soil step at a month's first
record, where two files meet) on the same site-years as they are and with the next
site-year's records from 1 September or from 1 June on (another tower's file joined, the
overlap dropped), on the demo records and on the examples' and trial site files
(``--trials DIR ...``).

Round leftovers50: a season pasted, the next site-year's April to August (5 months), is
named in 39 of 68 with joints up to 200 days apart (0 at 92 days, the limit before);
July alone 41 of 68 and false alarms 0 as before.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_pairing_uptake import _trial_frames  # noqa: E402
from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import spliced_records  # noqa: E402
from fluxpart.demo import site_year  # noqa: E402


def named(frame) -> bool:
    return spliced_records.spliced_records(frame["tair"].to_numpy(dtype=float),
                                           frame["tsoil"].to_numpy(dtype=float),
                                           frame.index) is not None


EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def file_named(frame) -> bool:
    return spliced_records.file_joint(frame["tsoil"].to_numpy(dtype=float),
                                      frame.index) is not None


def _taken(frame, other, positions):
    """``frame`` with the records at `positions` taken from ``other``."""
    positions = positions[positions < len(other)]
    out = frame.copy()
    columns = [c for c in frame.columns if c in other.columns]
    out.iloc[positions, [frame.columns.get_loc(c) for c in columns]] = (
        other[columns].iloc[positions].to_numpy())
    return out


def joined(frame, other, month):
    """``frame`` to the end of ``month - 1``, ``other``'s records from ``month`` on."""
    start = pd.Timestamp(frame.index[0].year, month, 1)
    return _taken(frame, other, np.flatnonzero(frame.index >= start))


def pasted(frame, other, months=(7,)):
    """``frame`` with the records of its `months` (the 7th by default) taken from ``other``
    at the same positions."""
    return _taken(frame, other, np.flatnonzero(np.isin(frame.index.month, months)))


def main(argv=None):
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    args = parser.parse_args(argv)
    frames = [(name, sy.frame) for name, sy in site_years()]
    false_calls, hits, season_hits, planted = [], 0, 0, 0
    file_calls, file_hits = [], {9: 0, 6: 0}
    for position, (name, frame) in enumerate(frames):
        if named(frame):
            false_calls.append(name)
        if file_named(frame):
            file_calls.append(name)
        step = frame.index[1] - frame.index[0]
        others = [f for n, f in frames[position + 1:] + frames[:position]
                  if n.split()[0] == name.split()[0] and f.index[1] - f.index[0] == step]
        if others:
            planted += 1
            hits += named(pasted(frame, others[0]))
            season_hits += named(pasted(frame, others[0], (4, 5, 6, 7, 8)))
            for month in file_hits:
                file_hits[month] += file_named(joined(frame, others[0], month))
    demo_calls = []
    for variant in ("c3", "c4"):
        for minutes in (30, 60):
            frame = site_year(3, years=10, interval_minutes=minutes, variant=variant)[0]
            if named(frame) or file_named(frame):
                demo_calls.append(f"demo {variant} {minutes}")
    print(f"false alarms: {len(false_calls)} of {len(frames)} generated site-years "
          f"{false_calls}; demo ten-year records: {demo_calls or 0}")
    print(f"another site-year's July pasted: named in {hits} of {planted}")
    print(f"another site-year's April-August pasted: named in {season_hits} of {planted}")
    print(f"file joint: false alarms {len(file_calls)} of {len(frames)} {file_calls or ''}; "
          + ", ".join(f"the next site-year's records from month {m} on named {n} of {planted}"
                      for m, n in file_hits.items()))
    files = [(name, file_named(frame) or named(frame))
             for name, frame in _trial_frames([EXAMPLES, *args.trials])]
    print("".join(f"  CALLED {name}\n" for name, call in files if call), end="")
    print(f"examples and trial site files: false alarms {sum(c for _, c in files)} of "
          f"{len(files)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
