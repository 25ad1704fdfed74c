"""Gradual night u* loss: the threshold read, the loss left in kept nights, NEE coverage.

INVENTED DATA: the site-years of :mod:`fluxpart.scenarios` (fictional sites), generated
twice on the same random numbers: with the default step loss (all the loss below the
planted threshold) and with ``night_loss="gradual"`` (:func:`fluxpart.scenarios.
gradual_share`: 99 % of the flux measured at the planted threshold, 95 % at 0.80 of it,
the loss fading smoothly up to it). Runs :func:`fluxpart.process` (default settings) on
both and prints per site-year and in summary:

- the detector's year threshold against the u* where 99 % / 95 % is measured;
- the bootstrap's 95th percentile of the threshold against the 99 % u* (does any u*
  scenario reach the plateau?);
- the planted loss left in the kept night records [g C m-2] (records the pipeline kept,
  at the found threshold) and the NEE moved by the loss (gradual minus step: kept and
  filled records together);
- NEE error, coverage of the stated 95 % interval, the u* part and spread;
- a data estimate of the loss left above the threshold from the kept nights themselves
  (:func:`kept_rise`): how night NEE still rises with u* above the threshold, with its
  standard error, to judge whether an interval term built on it would separate the two
  shapes.

Usage (one heavy job at a time on a shared machine)::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_gradual_loss.py \
        --sites 21 [--start 0] [--csv FILE]
"""

from __future__ import annotations

import argparse
import sys
import warnings

import numpy as np
import pandas as pd

#: u* at which the gradual shape measures 95 % of the flux, as a share of the 99 % u*:
#: sqrt(ln(20 * 0.9) / ln(100 * 0.9)) (from :func:`fluxpart.scenarios.gradual_share`).
U95_OVER_U99 = float(np.sqrt(np.log(18.0) / np.log(90.0)))


def kept_rise(timeseries: pd.DataFrame, interval_minutes: int) -> tuple[float, float]:
    """Loss left above the threshold in the kept nights, estimated from them [g C m-2].

    In each stratum (two-month block x temperature sextile of the kept night records),
    night NEE is regressed on u*/threshold over the kept records; the slope, relative to
    the stratum's mean NEE, times the distance of each night record's u* below the
    stratum's 90th percentile of u* (0 above it), summed over the kept and the filled
    night records of the stratum, is the loss that a rise continuing up to the 90th
    percentile would leave in the year. Pooled: slope weighted by its inverse variance.

    Returns
    -------
    (estimate, standard_error) in g C m-2 a year (negative: NEE too low).
    """
    from fluxpart.budget import flux_to_carbon

    ts = timeseries
    night = ts["is_night"].to_numpy(bool)
    kept = night & (ts["rejection_reason"] == "kept").to_numpy()
    filled_night = night & ~kept & ts["nee_filled"].notna().to_numpy()
    thr = ts["ustar_threshold"].to_numpy(float)
    x = ts["ustar"].to_numpy(float) / thr
    y = ts["nee"].to_numpy(float)
    tair = ts["tair_filled"].to_numpy(float) if "tair_filled" in ts else ts["tair"].to_numpy()
    block = ((ts.index.month.to_numpy() - 1) // 2)
    total, variance = 0.0, 0.0
    for b in np.unique(block):
        in_block = kept & (block == b)
        if in_block.sum() < 60:
            continue
        edges = np.nanquantile(tair[in_block], np.linspace(0, 1, 7))
        klass = np.clip(np.searchsorted(edges, tair, side="right") - 1, 0, 5)
        for k in range(6):
            members = in_block & (klass == k) & np.isfinite(x) & np.isfinite(y)
            if members.sum() < 20:
                continue
            xs, ys = x[members], y[members]
            mean = ys.mean()
            if not np.isfinite(mean) or mean <= 0.2:
                continue
            design = np.column_stack([np.ones_like(xs), xs])
            coef, *_ = np.linalg.lstsq(design, ys, rcond=None)
            resid = ys - design @ coef
            dof = max(len(ys) - 2, 1)
            s2 = float(resid @ resid) / dof
            sxx = float(((xs - xs.mean()) ** 2).sum())
            if sxx <= 0:
                continue
            slope, slope_se = coef[1], np.sqrt(s2 / sxx)
            top = np.quantile(xs, 0.9)
            stratum = (block == b) & (klass == k) & (kept | filled_night)
            xx = np.where(np.isfinite(x), x, np.nanmedian(xs))
            reach = np.clip(top - xx[stratum], 0.0, None)
            weight = float(flux_to_carbon(reach, interval_minutes).sum())
            total += -slope * weight
            variance += (slope_se * weight) ** 2
    return total, float(np.sqrt(variance))


def run_one(seed: int, planted: bool = False) -> dict:
    """One seed, both loss shapes: thresholds, the loss left, errors and coverage.

    With `planted`, the gradual year is also run with the threshold fixed at the 99 %
    u* (``ustar_method = "fixed"``), columns ``planted_*``.
    """
    import fluxpart
    from fluxpart import scenarios
    from fluxpart.budget import flux_to_carbon
    from fluxpart.config import Config

    row = {"seed": seed}
    for shape in ("step", "gradual") + (("planted",) if planted else ()):
        site_year = scenarios.generate(seed, night_loss="step" if shape == "step" else "gradual")
        scenario = site_year.scenario
        row.update(archetype=scenario.archetype, interval=scenario.interval_minutes,
                   u99=scenario.parameters["ustar_threshold"])
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            config = (Config(ustar_method="fixed",
                             ustar_threshold=round(scenario.parameters["ustar_threshold"], 4))
                      if shape == "planted" else Config())
            result = fluxpart.process(site_year.frame, site_year.site, config)
        annual = result.annual.loc[scenario.year]
        truth = float(site_year.annual_truth["nee"])
        ts = result.timeseries
        kept = (ts["rejection_reason"] == "kept").to_numpy() & ts["is_night"].to_numpy(bool)
        lost = (site_year.measured_share - 1.0) * site_year.truth["nee"].to_numpy()
        table = result.ustar
        year_rows = (table[(table["year"] == scenario.year) & (table["period"] == "year")]
                     if {"year", "period"} <= set(table.columns) else table.iloc[:0])
        year_row = (year_rows.iloc[0] if len(year_rows)
                    else pd.Series({"threshold_p95": np.nan}))
        row.update({
            f"{shape}_found": float(annual["ustar_threshold"]),
            f"{shape}_p95": float(year_row.get("threshold_p95", np.nan)),
            f"{shape}_kept_loss": float(flux_to_carbon(lost[kept],
                                                       scenario.interval_minutes).sum()),
            f"{shape}_nee": float(annual["nee"]),
            f"{shape}_error": float(annual["nee"]) - truth,
            f"{shape}_covered": bool(annual["nee_ci95_low"] <= truth <= annual["nee_ci95_high"]),
            f"{shape}_sigma": float(annual["nee_uncertainty_total"]),
            f"{shape}_ustar_part": float(annual.get("nee_uncertainty_ustar", np.nan)),
            f"{shape}_spread": float(annual.get("nee_ustar_spread", np.nan)),
        })
        estimate, se = kept_rise(ts, scenario.interval_minutes)
        row[f"{shape}_rise"], row[f"{shape}_rise_se"] = estimate, se
    row["moved"] = row["gradual_nee"] - row["step_nee"]
    return row


def summarise(table: pd.DataFrame) -> None:
    """Print the summary figures."""
    u95 = table["u99"] * U95_OVER_U99
    for shape in ("step", "gradual"):
        rel99 = table[f"{shape}_found"] / table["u99"] - 1
        rel95 = table[f"{shape}_found"] / u95 - 1
        err = table[f"{shape}_error"]
        print(f"{shape:8s} n={len(table)}: found/u99-1 median {rel99.median():+.1%} "
              f"(within 20 %: {(rel99.abs() <= 0.2).sum()}), found/u95-1 median "
              f"{rel95.median():+.1%} (within 20 %: {(rel95.abs() <= 0.2).sum()}); "
              f"p95 >= u99 in {(table[f'{shape}_p95'] >= table['u99']).sum()}")
        print(f"         kept loss median {table[f'{shape}_kept_loss'].median():+.2f} "
              f"(range {table[f'{shape}_kept_loss'].min():+.2f} .. "
              f"{table[f'{shape}_kept_loss'].max():+.2f}) g C m-2; NEE error median "
              f"{err.median():+.2f}, median |.| {err.abs().median():.2f}, worst "
              f"{err.abs().max():.2f}, mean {err.mean():+.2f}; covered "
              f"{table[f'{shape}_covered'].sum()}/{len(table)}; sigma median "
              f"{table[f'{shape}_sigma'].median():.2f}, u* part median "
              f"{table[f'{shape}_ustar_part'].median():.2f}")
        z = table[f"{shape}_rise"] / table[f"{shape}_rise_se"]
        print(f"         kept-rise estimate median {table[f'{shape}_rise'].median():+.2f} "
              f"(se median {table[f'{shape}_rise_se'].median():.2f}); |z| > 2 in "
              f"{(z.abs() > 2).sum()}; corr with kept loss "
              f"{np.corrcoef(table[f'{shape}_rise'], table[f'{shape}_kept_loss'])[0, 1]:.2f}")
    if "planted_error" in table:
        err = table["planted_error"]
        print(f"gradual, threshold fixed at the 99 % u*: kept loss median "
              f"{table['planted_kept_loss'].median():+.2f}; NEE error median {err.median():+.2f}, "
              f"median |.| {err.abs().median():.2f}, worst {err.abs().max():.2f}, mean "
              f"{err.mean():+.2f}; covered {table['planted_covered'].sum()}/{len(table)}")
    print(f"NEE moved by the gradual loss (gradual - step): median {table['moved'].median():+.2f}"
          f", range {table['moved'].min():+.2f} .. {table['moved'].max():+.2f} g C m-2")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=21)
    parser.add_argument("--start", type=int, default=0)
    parser.add_argument("--csv")
    parser.add_argument("--planted", action="store_true",
                        help="also run the gradual year at the planted (99 %%) threshold")
    args = parser.parse_args(argv)
    rows = []
    for seed in range(args.start, args.start + args.sites):
        row = run_one(seed, args.planted)
        rows.append(row)
        print(f"seed {seed:3d} {row['archetype']:24s} u99 {row['u99']:.3f} found step "
              f"{row['step_found']:.3f} gradual {row['gradual_found']:.3f} (p95 "
              f"{row['gradual_p95']:.3f}); kept loss {row['gradual_kept_loss']:+6.2f}; error "
              f"step {row['step_error']:+6.2f} gradual {row['gradual_error']:+6.2f} "
              f"(sigma {row['gradual_sigma']:.1f}, covered {row['gradual_covered']}); rise "
              f"step {row['step_rise']:+.2f}+-{row['step_rise_se']:.2f} gradual "
              f"{row['gradual_rise']:+.2f}+-{row['gradual_rise_se']:.2f}", flush=True)
    table = pd.DataFrame(rows)
    if args.csv:
        table.to_csv(args.csv, index=False)
    summarise(table)
    return 0


if __name__ == "__main__":
    sys.exit(main())
