"""False alarms and power of two checks of round mistakes42 on generated site-years.

``ustar_prefilter.nee_filtered_by_ustar`` (night NEE already filtered by a u* threshold)
and ``vpd_zero.vpd_zero_in_sunshine`` (VPD reading 0 in sunshine month after month) are
run on each generated site-year as it is (a call is a false alarm) and with the mistake
planted (a call is a hit): night NEE removed below 1.5 times the planted u* threshold
(at least 0.1 m s-1 above it), and VPD replaced by an invented rain gauge's column (0 in
93 % of the records, exponential amounts of mean 0.6 where it rains).

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13 (other physics than the methods assume). The night
mask is the run's default (Rg below 10 W m-2); NEE the site flag rejects is removed as the
screen removes it. Usage (about a minute)::

    .venv/bin/python tests/benchmarks/bench_prefilter_vpd_zero.py

Round mistakes42 (2026-12-05): 68 site-years; false alarms 0 of 68 for either check,
planted mistakes named in 68 of 68 for each; the calmest 5 % of the night records hold
NEE in 26-59 % (median 44 %). The invented Quillmoor demo of ten years (seed 3, c3 and
c4, 30 and 60 min, each year judged alone too): 0.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from fluxpart import scenarios, ustar_prefilter, vpd_zero  # noqa: E402


def site_years():
    """(name, SiteYear) of the three generated sets."""
    import bench_generalisation
    import bench_other_physics
    for seed in range(40):
        yield f"scenarios {seed}", scenarios.generate(seed)
    for seed in range(14):
        yield f"generalisation {seed}", bench_generalisation.generate(seed)[1]
    for seed in range(14):
        yield f"other_physics {seed}", bench_other_physics.generate(seed)


def checks(frame, threshold):
    """The two checks' calls as (prefilter, vpd zero), each a bool."""
    nee = frame["nee"].to_numpy(dtype=float).copy()
    if "nee_flag" in frame.columns:
        nee[frame["nee_flag"].to_numpy() != 0] = np.nan
    rg = frame["rg"].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        night = rg < 10.0
    prefilter = ustar_prefilter.nee_filtered_by_ustar(
        nee, frame["ustar"].to_numpy(dtype=float), night, index=frame.index)
    zero = vpd_zero.vpd_zero_in_sunshine(frame["vpd"].to_numpy(dtype=float), rg,
                                         frame["tair"].to_numpy(dtype=float), frame.index)
    return prefilter is not None, zero is not None


def main():
    rng = np.random.default_rng(42)
    false_calls = {"prefilter": [], "vpd zero": []}
    hits = {"prefilter": 0, "vpd zero": 0}
    shares = []
    count = 0
    for name, site_year in site_years():
        count += 1
        frame = site_year.frame
        threshold = float(site_year.scenario.parameters["ustar_threshold"])
        prefilter, zero = checks(frame, threshold)
        if prefilter:
            false_calls["prefilter"].append(name)
        if zero:
            false_calls["vpd zero"].append(name)
        night = (frame["rg"] < 10.0).to_numpy()
        ustar = frame["ustar"].to_numpy(dtype=float)
        calm = night & (ustar < np.nanpercentile(ustar[night], 5))
        shares.append(float(np.isfinite(frame["nee"].to_numpy()[calm]).mean()))
        planted = frame.copy()
        cut = max(1.5 * threshold, threshold + 0.1)
        with np.errstate(invalid="ignore"):
            planted.loc[night & (ustar < cut), "nee"] = np.nan
        rain = np.where(rng.random(len(frame)) < 0.07, rng.exponential(6.0, len(frame)), 0.0)
        planted["vpd"] = np.where(np.isfinite(frame["vpd"]), np.round(rain, 0), np.nan)
        hit_prefilter, hit_zero = checks(planted, threshold)
        hits["prefilter"] += hit_prefilter
        hits["vpd zero"] += hit_zero
    print(f"{count} generated site-years")
    print(f"share of the calmest 5 % of night records holding NEE: "
          f"{min(shares):.2f}-{max(shares):.2f} (median {np.median(shares):.2f})")
    for check in hits:
        print(f"{check}: false alarms {len(false_calls[check])} of {count} "
              f"{false_calls[check] or ''}; planted named {hits[check]} of {count}")


if __name__ == "__main__":
    main()
