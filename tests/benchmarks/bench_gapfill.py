"""Benchmark: complete MDS gap filling (drivers + NEE) of one site-year, against the oracle.

Run ``python tests/benchmarks/bench_gapfill.py`` from the repository root. Prints
the time of :func:`fluxpart.gapfill.fill_frame` on one year of 30-min records
(median and minimum of several runs), the same for the literal per-gap oracle of
``tests/gapfill_oracle.py``, their ratio, the peak memory of one fill (tracemalloc)
and, to show that time and memory grow linearly, the same for ten years.

With ``--accuracy`` it prints instead the known-truth figures of issue 11: the RMSE
of Tair, VPD and Tsoil fills on artificial gaps of 1–3 h (interpolation against the
radiation-similarity fill), and the annual NEE error of ``fluxpart.process`` on the
demo over seeds 0–5 for both donor rules (about a minute per rule).

The data are the invented demo site of :func:`fluxpart.demo.site_year` with night
records of low u* removed as the u* filter would (about 40 % gaps), or an invented
year made here when the demo module is not available.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np
import pandas as pd

_ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(_ROOT), str(_ROOT / "tests")]

from gapfill_oracle import oracle_fill_drivers, oracle_fill_marginal  # noqa: E402

from fluxpart import gapfill  # noqa: E402

#: Night (Rg below this [W m-2]) with u* below the threshold [m s-1] is rejected,
#: as the u* filter does before gap filling (common practice).
_NIGHT_RG = 10.0
_USTAR_THRESHOLD = 0.18


def _synthetic_years(years: int, seed: int) -> pd.DataFrame:
    """An invented 30-min record with ~40 % NEE gaps (used if fluxpart.demo is absent)."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2021-01-01", periods=17520 * years, freq="30min")
    days = np.asarray((index - index[0]) / pd.Timedelta(days=1))
    hour = (days % 1.0) * 24.0
    season = np.cos(2 * np.pi * (days - 196) / 365.0)
    rg = (np.clip(850 * np.sin(np.pi * (hour - 6) / 12), 0, None) * (0.65 + 0.35 * season)
          * rng.uniform(0.3, 1.0, index.size))
    tair = 9 + 9 * season + 5 * np.sin(np.pi * (hour - 9) / 12) + rng.normal(0, 1.0, index.size)
    vpd = np.clip(4 + 0.5 * tair + 8 * rg / 850 + rng.normal(0, 1.5, index.size), 0, None)
    nee = 2.5 * np.exp(0.07 * tair) - 22 * rg / (rg + 350) + rng.normal(0, 1.2, index.size)
    frame = pd.DataFrame({"nee": nee, "rg": rg, "tair": tair, "vpd": vpd}, index=index)
    night = rg < _NIGHT_RG
    frame.loc[rng.random(index.size) < np.where(night, 0.6, 0.2), "nee"] = np.nan
    for name in ("rg", "tair", "vpd"):
        frame.loc[rng.random(index.size) < 0.02, name] = np.nan
    return frame


def _site_years(years: int, seed: int) -> tuple[pd.DataFrame, str]:
    try:
        from fluxpart import demo
    except ImportError:
        return _synthetic_years(years, seed), "invented year made by the benchmark"
    frame, _ = demo.site_year(seed=seed, years=years)
    rejected = (frame["rg"] < _NIGHT_RG) & (frame["ustar"] < _USTAR_THRESHOLD)
    if "nee_flag" in frame.columns:
        rejected |= frame["nee_flag"].fillna(0).to_numpy() != 0
    frame = frame.assign(nee=frame["nee"].mask(rejected))
    return frame[[c for c in ("nee", "rg", "tair", "vpd", "tsoil") if c in frame.columns]], \
        "fluxpart.demo.site_year, night records with u* < 0.18 m s-1 removed"


def _night(frame: pd.DataFrame) -> np.ndarray:
    """Night as the pipeline sees it: Rg below 10 W m-2, or no sun where Rg is missing."""
    from fluxpart import demo, solar

    geometry = solar.solar_geometry(frame.index, demo.site(), interval_minutes=30)
    return solar.night_mask(frame["rg"].to_numpy(), geometry["potential_radiation"].to_numpy(),
                            _NIGHT_RG)


def _oracle_frame(frame: pd.DataFrame, is_night) -> pd.DataFrame:
    drivers = oracle_fill_drivers(frame)
    return oracle_fill_marginal(frame["nee"], gapfill.driver_conditions(drivers, soil=True),
                                frame.index, is_night=is_night)


def _driver_accuracy(seeds=range(6), gaps_per_year=300) -> None:
    """RMSE of driver fills on artificial 1–3 h gaps of complete demo years."""
    from fluxpart import demo

    errors = {(name, hours): [] for name in ("tair", "vpd", "tsoil") for hours in (3.0, 0.0)}
    for seed in seeds:
        frame, _ = demo.site_year(seed=seed, gaps=False, spikes=False)
        rng = np.random.default_rng(seed)
        starts = rng.choice(np.arange(10, len(frame) - 20), size=gaps_per_year, replace=False)
        hidden = np.zeros(len(frame), dtype=bool)
        for start, length in zip(starts, rng.integers(2, 7, starts.size), strict=True):
            hidden[start:start + length] = True
        gappy = frame.copy()
        for name in ("tair", "vpd", "tsoil"):
            gappy.loc[hidden, name] = np.nan
        for hours in (3.0, 0.0):
            filled = gapfill.fill_drivers(gappy, interpolation_hours=hours)
            for name in ("tair", "vpd", "tsoil"):
                error = filled[f"{name}_filled"].to_numpy()[hidden] - frame[name].to_numpy()[hidden]
                errors[(name, hours)].append(error)
    print(f"driver fills on artificial gaps of 1-3 h (demo seeds {list(seeds)}, "
          f"{gaps_per_year} gaps per year):")
    for name, unit in (("tair", "K"), ("vpd", "hPa"), ("tsoil", "K")):
        parts = []
        for hours, label in ((3.0, "interpolated"), (0.0, "MDS only")):
            error = np.concatenate(errors[(name, hours)])
            parts.append(f"{label} RMSE {np.sqrt(np.mean(error**2)):.2f} {unit}, "
                         f"bias {np.mean(error):+.2f}")
        print(f"  {name}: " + "; ".join(parts))


def _nee_accuracy(seeds=range(6)) -> None:
    """Annual NEE error of the whole pipeline on the demo for both donor rules."""
    import fluxpart
    from fluxpart import demo

    print(f"annual NEE error [g C m-2] of fluxpart.process on demo seeds {list(seeds)}:")
    for rule in gapfill.DONOR_RULES:
        errors = []
        for seed in seeds:
            frame, truth = demo.site_year(seed)
            result = fluxpart.process(frame, demo.site(), fluxpart.Config(
                gapfill_donors=rule, ustar_bootstrap_draws=0))
            errors.append(demo.compare_with_truth(result.annual, truth)
                          .xs("nee", level="estimate_of")["error"].iloc[0])
        errors = np.array(errors)
        print(f"  {rule}: " + " ".join(f"{e:+.1f}" for e in errors)
              + f"; median {np.median(errors):+.1f}, worst |error| {np.max(np.abs(errors)):.1f}")


def _times(function, runs: int) -> list[float]:
    out = []
    for _ in range(runs):
        start = time.perf_counter()
        function()
        out.append(time.perf_counter() - start)
    return out


def _peak_memory(function) -> float:
    tracemalloc.start()
    function()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 2**20


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=11, help="timed runs of the vectorised fill")
    parser.add_argument("--oracle-runs", type=int, default=5, help="timed runs of the oracle")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--skip-ten-years", action="store_true")
    parser.add_argument("--accuracy", action="store_true",
                        help="print the known-truth accuracy figures instead of timings")
    args = parser.parse_args(argv)
    if args.accuracy:
        _driver_accuracy()
        _nee_accuracy()
        return

    frame, source = _site_years(1, args.seed)
    nee_gaps = frame["nee"].isna().mean()
    print(f"data: {source}")
    print(f"records: {len(frame)} ({frame.index[1] - frame.index[0]} spacing), "
          f"NEE gaps {nee_gaps:.1%}, driver gaps "
          + ", ".join(f"{c} {frame[c].isna().mean():.1%}" for c in frame.columns if c != "nee"))

    is_night = _night(frame)
    filled = gapfill.fill_frame(frame, is_night=is_night)  # warm-up, and the result to compare
    oracle = _oracle_frame(frame, is_night)
    np.testing.assert_allclose(filled["nee_filled"], oracle["value"], rtol=1e-9, atol=1e-12)
    np.testing.assert_array_equal(filled["nee_fill_quality"], oracle["quality"])
    print("vectorised and oracle fills agree (rtol 1e-9; methods, counts, quality equal)")
    print("NEE fill methods: " + ", ".join(
        f"{m}: {c}" for m, c in filled["nee_fill_method"].value_counts().sort_index().items()))

    fast = _times(lambda: gapfill.fill_frame(frame, is_night=is_night), args.runs)
    slow = _times(lambda: _oracle_frame(frame, is_night), args.oracle_runs)
    print(f"complete gap filling (drivers + NEE), one site-year, median of {args.runs} runs: "
          f"{statistics.median(fast):.4f} s (min {min(fast):.4f} s)")
    print(f"oracle (per-gap loop), median of {args.oracle_runs} runs: "
          f"{statistics.median(slow):.4f} s (min {min(slow):.4f} s)")
    print(f"speed ratio oracle / vectorised: median {statistics.median(slow) / statistics.median(fast):.1f}x, "
          f"min {min(slow) / min(fast):.1f}x")
    print(f"peak memory of one vectorised fill (tracemalloc): "
          f"{_peak_memory(lambda: gapfill.fill_frame(frame, is_night=is_night)):.1f} MiB")

    if not args.skip_ten_years:
        decade, _ = _site_years(10, args.seed)
        night = _night(decade)
        ten = _times(lambda: gapfill.fill_frame(decade, is_night=night), 3)
        print(f"ten years ({len(decade)} records), median of 3 runs: "
              f"{statistics.median(ten):.3f} s; peak memory "
              f"{_peak_memory(lambda: gapfill.fill_frame(decade, is_night=night)):.1f} MiB")


if __name__ == "__main__":
    main()
