"""Can a gain of NEE that changes from one day on be told from the ecosystem? (round mistakes58)

A span gas of the wrong concentration at a recalibration, a logger multiplier or a unit changed
in a new logger program multiplies NEE from one day on (x1.5, x0.5, x44/12 for g CO2 read as
g C). On the grassland example (``probe_data_mistakes.py``) x1.5 from 12 May moves daytime GPP
by +36σ and NEE by −14σ without a word. A gain multiplies the night's respiration and the
day's uptake alike, so the candidate signature is a step of the same size, from the same day,
in both:

- night: the daily median of the dark records' NEE (Rg below 10 W m-2), brought to 15 °C with
  a Q10 of 2 on the soil temperature (Lloyd and Taylor 1994: respiration rises about twofold
  per 10 K over the growing season's range (m); common practice), log of the positive days;
- day: the slope of NEE on Rg over the records of 20-400 W m-2 (the light response's initial,
  unsaturated part; Ruimy et al. 1995 (m)), pooled over the span, where it is uptake;
- at each day, the log ratio of the 14 days after to the 14 before and of the 45 after to the
  45 before, for both (four steps; spans of at least 7 / 20 days with a value); a candidate
  where all four share a sign, lie within 0.2 of each other (a step, not the season's ramp)
  and the span's daily VPD (from tair and RH, Tetens (m)) moves less than 1.5 times and the
  soil is at 3 °C or more (a monsoon's onset or a freeze steps both); the score is the
  smallest of the four |steps|, its best day named.

For each clean probe site-year (``probe_clean_sites*.py``' own generators; nothing of
``fluxpart`` is used) it plants each factor from a seeded day (60 days from either end) and
prints the clean site-years with the largest scores and, per threshold, how many planted
site-years score above it (and within 3 days of the planted day). Not collected by pytest;
prints figures and asserts nothing.

Round mistakes58 (seeds 0 and 1, 388 site-years of the six probes): the clean scores reach
1.01 (a tropical forest's dry season ending in a day: night and day ×2.75 at once), 0.49,
0.45, 0.45; at a threshold 0.55 x1.5 is named in 1 of 388, x0.5 in 66, x2 in 60, x44/12 in
84, x12/44 in 74, with 1 clean site-year named. Not landed: see DEVELOPERS (round
mistakes58). Usage (about 4 min on two shared cores)::

    OMP_NUM_THREADS=1 PYTHONPATH=. python tests/benchmarks/bench_nee_gain_step.py --seeds 0,1
"""

from __future__ import annotations

import argparse
import importlib
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

PROBES = ("probe_clean_sites", "probe_clean_sites_weather", "probe_clean_sites_third",
          "probe_clean_sites_fourth", "probe_clean_sites_fifth", "probe_clean_sites_sixth")
SPANS = ((14, 7), (45, 20))         # days either side, days with a value needed
Q10 = 2.0
NIGHT_RG, LOW_RG, HIGH_RG = 10.0, 20.0, 400.0     # W m-2
SPREAD, VPD_BAND, WARM = 0.2, np.log(1.5), 3.0


def _tetens_kpa(t):
    return 0.6108 * np.exp(17.27 * t / (t + 237.3))


def _span_steps(daily, span, need):
    """Median of ``daily`` over the ``span`` days from each day less that over the span before."""
    out = np.full(len(daily), np.nan)
    for i in range(span, len(daily) - span + 1):
        before, after = daily[i - span:i], daily[i:i + span]
        before, after = before[np.isfinite(before)], after[np.isfinite(after)]
        if len(before) >= need and len(after) >= need:
            out[i] = np.median(after) - np.median(before)
    return out


def _span_low(daily, span, need):
    out = np.full(len(daily), np.nan)
    for i in range(span, len(daily) - span + 1):
        before, after = daily[i - span:i], daily[i:i + span]
        before, after = before[np.isfinite(before)], after[np.isfinite(after)]
        if len(before) >= need and len(after) >= need:
            out[i] = min(np.median(before), np.median(after))
    return out


def gain_step(nee, rg, tsoil, vpd, stamps):
    """The best day of a gain step and its score (the smallest |log step| of the four)."""
    day = stamps.normalize()
    days = pd.date_range(day.min(), day.max(), freq="D")
    index = ((day - days[0]) // pd.Timedelta(days=1)).to_numpy()
    n_days = len(days)
    per_day = 86400 / (stamps[1] - stamps[0]).total_seconds()
    dark = (rg < NIGHT_RG) & np.isfinite(nee) & np.isfinite(tsoil)
    at_15 = pd.Series(np.where(dark, nee * Q10 ** (-(tsoil - 15.0) / 10.0), np.nan))
    groups = at_15.groupby(index)
    night = groups.median().where(groups.count() >= max(2, int(per_day // 12)))
    night = night.reindex(range(n_days)).to_numpy()
    log_night = np.log(np.where(night > 0, night, np.nan))
    lit = (rg >= LOW_RG) & (rg <= HIGH_RG) & np.isfinite(nee)
    x, y, w = np.where(lit, rg, 0.0), np.where(lit, nee, 0.0), lit.astype(float)
    sums = [np.r_[0.0, np.cumsum(np.bincount(index, weights=v, minlength=n_days))]
            for v in (w, x, y, x * x, x * y)]
    vpd_day = pd.Series(np.where(rg > LOW_RG, vpd, np.nan)).groupby(index).median()
    vpd_day = vpd_day.reindex(range(n_days)).to_numpy()
    log_vpd = np.log(np.where(vpd_day > 0.05, vpd_day, np.nan))
    soil = pd.Series(tsoil).groupby(index).mean().reindex(range(n_days)).to_numpy()
    steps, vpd_steps, low = [], [], np.full(n_days, np.inf)
    for span, need in SPANS:
        steps.append(_span_steps(log_night, span, need))
        vpd_steps.append(_span_steps(log_vpd, span, need))
        low = np.fmin(low, _span_low(soil, span, need))
    for span, need in SPANS:
        i = np.arange(span, n_days - span + 1)
        slopes = []
        for lo, hi in ((i - span, i), (i, i + span)):
            n, sx, sy, sxx, sxy = (s[hi] - s[lo] for s in sums)
            var = sxx - sx * sx / np.maximum(n, 1)
            cov = sxy - sx * sy / np.maximum(n, 1)
            slope = np.where((n >= 4 * need) & (var > 0), cov / np.where(var > 0, var, 1), np.nan)
            slopes.append(np.where(slope < 0, -slope, np.nan))
        day_step = np.full(n_days, np.nan)
        day_step[i] = np.log(slopes[1]) - np.log(slopes[0])
        steps.append(day_step)
    steps = np.vstack(steps)
    whole = np.all(np.isfinite(steps), axis=0)
    same = whole & (np.all(steps > 0, axis=0) | np.all(steps < 0, axis=0))
    spread = np.ptp(np.where(whole, steps, 0.0), axis=0)
    calm = np.all(np.abs(np.vstack(vpd_steps)) <= VPD_BAND, axis=0) & (low >= WARM)
    score = np.where(same & (spread <= SPREAD) & calm, np.min(np.abs(steps), axis=0), 0.0)
    best = int(np.argmax(score))
    return days[best], float(score[best])


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--probes", default=",".join(PROBES))
    parser.add_argument("--seeds", default="0,1")
    parser.add_argument("--factors", default="1,1.5,0.5,2,3.6667,0.2727")
    args = parser.parse_args(argv)
    factors = [float(f) for f in args.factors.split(",")]
    rows = []
    for name in args.probes.split(","):
        probe = importlib.import_module(name)
        for seed in (int(s) for s in args.seeds.split(",")):
            for spec in probe.SITES:
                frame, _ = probe.generate(spec, seed)
                rg = (frame["rg"] if "rg" in frame else frame["ppfd"] / 2.1).to_numpy(float)
                tsoil = (frame["tsoil"] if "tsoil" in frame else frame["tair"]).to_numpy(float)
                rh = np.clip(frame["rh"].to_numpy(float), 0.0, 100.0)
                vpd = _tetens_kpa(frame["tair"].to_numpy(float)) * (1.0 - rh / 100.0)
                per_day = int(round(86400 / (frame.index[1] - frame.index[0]).total_seconds()))
                first = int(np.random.default_rng([seed, 7, int(spec[0][1:])]).integers(
                    60, len(frame) // per_day - 60))
                for factor in factors:
                    nee = frame["nee"].to_numpy(float).copy()
                    nee[first * per_day:] *= factor
                    day, score = gain_step(nee, rg, tsoil, vpd, frame.index)
                    planted = frame.index[first * per_day].normalize()
                    rows.append({"probe": name, "site": spec[0], "seed": seed,
                                 "factor": round(factor, 3), "score": score, "day": day,
                                 "near": abs((day - planted).days) <= 3})
    table = pd.DataFrame(rows)
    clean = table[table.factor == 1.0]
    print("clean site-years with the largest scores:")
    print(clean.sort_values("score").tail(8).to_string(index=False))
    for factor in sorted(table.factor.unique()):
        part = table[table.factor == factor]
        counts = " ".join(f"{t}: {(part.score >= t).sum()} ({(part.near & (part.score >= t)).sum()})"
                          for t in (0.3, 0.4, 0.47, 0.55, 0.7))
        print(f"x{factor}: named (within 3 days) at thresholds {counts} of {len(part)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
