"""False alarms and power of ``summed_records.summed_stretch`` (round review66).

Trial 27's ten invented site-years (``trial_twentyseventh.simulate``, first draw), each
rewritten from a day on to records twice the interval long, tried every 4 days from
20 January to 10 December: the longer record's NEE the mean of the records it spans (an
honest change: a false alarm where named) or their sum (a rate's records added: named
where found; missing where either record is). Prints the counts per site and in all.

Usage: ``python tests/benchmarks/bench_summed_records.py`` (about a minute).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).parent))
import trial_twentyseventh as trial  # noqa: E402

from fluxpart.summed_records import summed_stretch  # noqa: E402


def rewritten(data: pd.DataFrame, day: pd.Timestamp, how):
    """The record's NEE from `day` on written as `how` (sum or mean) of record pairs:
    the regular record's NEE, its starts and the file's starts."""
    index, nee = data.index, data["nee"].to_numpy()
    later = index >= day
    pairs = np.flatnonzero(later)[: later.sum() // 2 * 2]
    written = pd.Series(np.nan, index=index)
    written[~later] = nee[~later]
    written.iloc[pairs[1::2]] = how(nee[pairs].reshape(-1, 2), axis=1)
    return written.to_numpy(), index, index[~later].append(index[pairs[1::2]])


def main() -> None:
    total = {"tried": 0, "means named": 0, "sums named": 0}
    for key, site in trial.SITES.items():
        data, _ = trial.simulate(site)
        year = data.index[0].year
        counts = dict.fromkeys(total, 0)
        for day in pd.date_range(f"{year}-01-20", f"{year}-12-10", freq="4D"):
            counts["tried"] += 1
            for how, label in ((np.mean, "means named"), (np.sum, "sums named")):
                counts[label] += summed_stretch(*rewritten(data, day, how),
                                                site.step) is not None
        print(f"{key} {site.name}: " + ", ".join(f"{k} {v}" for k, v in counts.items()))
        total = {k: total[k] + counts[k] for k in total}
    print("all: " + ", ".join(f"{k} {v}" for k, v in total.items()))


if __name__ == "__main__":
    main()
