"""Night gap-fill error of the independent trials split by mechanism (a benchmark script).

INVENTED DATA: the site-years of the known-truth trials (``trial_sixth.py`` ...
``trial_nineteenth.py``; fictional sites). Reads a trial's output folder (``--out`` of the
trial script: ``site_<key>/*.toml`` and ``out/``), draws the trial's truth again with the
trial's own ``simulate`` (first draw), runs :func:`fluxpart.pipeline.process_site_config` in
this process up to the budgets (the uncertainty stage is not run) and keeps the inputs of
the central NEE fill (:func:`fluxpart.method_settings.fill_nee`). It then fills the same
gaps again from altered donors and prints, per complete budget year, the error of the
filled night records (sun below the horizon in the trial's truth) [g C m-2]:

- ``fill``: the product's fill against the truth (the trials' ``err_filled_night``, with
  the night records of outages, which some trials score apart, included);
- ``loss``: the part the donors' planted u* loss carries into the fills: the fill of the
  measured donors minus the fill of the same donors with their loss undone (measured /
  the truth's ``share``); issue 11's candidate (a);
- ``meas``: the part of the donors' other measurement error (noise, spikes left, any
  planted sensor bias): the fill of the loss-free measured donors minus the fill of the
  donors' true NEE;
- ``select``: the error of filling the gaps' true NEE from the donors' true NEE with the
  product's estimator: the donors' conditions (candidate (b)) and the estimator's
  extrapolation (c); ``loss + meas + select = fill`` (the fills differ in donor values
  only); ``sel7``: the part of ``select`` filled by the all-driver step within ±7 days;
- ``mean``: ``select`` with the donors' mean (``gapfill_estimate = "donor_mean"``) in
  place of the local-linear estimate (c);
- ``soil``: ``select`` with soil temperature in place of air temperature as the night
  condition, where the site has it (b);
- ``windy`` / ``wsel``: ``fill`` / ``select`` with the night donors limited to records
  whose u* is at least 1.5 times the record's threshold (less loss, other conditions);
- ``stated``: the year's stated systematic gap-filling bias
  (``nee_uncertainty_gapfill_bias``, day and night, from the site's artificial gaps;
  candidate (d)) and ``sigma``, its stated 1-sigma gap-filling part;
- ``lossy``: the share of the kept night records measured below 99 % of their true flux
  [%] (donors carrying part of the loss), and ``lossm`` their mean loss [%].

After the rows: the mean and median of each column, the correlation of ``stated`` with
``fill`` and the share of years with ``|fill|`` within 1.96 ``sigma``. Not collected by
pytest; prints figures and asserts nothing. Usage (a site-year costs a few seconds)::

    OMP_NUM_THREADS=1 .venv/bin/python tests/benchmarks/trial_ninth.py --out /tmp/t9
    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_night_fill_split.py \
        ninth /tmp/t9 [--runs M,G] [--csv FILE]

A layout the trial itself refuses (a 10- or 15-minute file) and a run that stops are
skipped with a line. ``generated`` in place of a trial's name splits the calibration set's
site-years instead (``--seeds``; :func:`fluxpart.scenarios.generate`, whose loss is a step at
the planted threshold; night there is the fill's night mask; no stated columns)::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_night_fill_split.py \
        generated --seeds 0-19

``--planted-ustar`` fills at the planted threshold (the trials' option of that name, also
for the trials that lack it): the loss the donors carry beyond it. Figures: DEVELOPERS.md,
"Night fills of the trials split by mechanism (round nightfill48)".
"""

from __future__ import annotations

import argparse
import dataclasses
import importlib.util
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from fluxpart import method_settings, scenarios, uncertainty_assembly, ustar_runs  # noqa: E402
from fluxpart.config import Config  # noqa: E402
from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.pipeline import process, process_site_config  # noqa: E402

#: g C per umol (standard atomic weight of carbon 12.011 g mol-1 (m)).
GC_PER_UMOL = 12.011e-6


class _Stop(Exception):
    """Raised in place of the uncertainty stage: the fills are all that is needed."""


def central_fill_inputs(run):
    """The positional and keyword arguments of the last central NEE fill (``gaps`` not
    given) of `run()` (a call of the pipeline), stopped before its uncertainty stage, and
    the u* of each record and the central run's threshold [m s-1]."""
    calls, thresholds = [], []
    real_fill, real_run = ustar_runs.fill_nee, ustar_runs.fill_and_partition

    def spy_fill(*args, **kwargs):
        if kwargs.get("gaps") is None:
            calls.append((args, dict(kwargs)))
        return real_fill(*args, **kwargs)

    def spy_run(*args, **kwargs):
        given = args[10] if len(args) > 10 else kwargs.get("central_fill")
        if given is None:                       # the central run (a scenario's has one)
            thresholds.append((args[0]["ustar"].to_numpy(dtype=float), np.asarray(args[5])))
        return real_run(*args, **kwargs)

    def stop(*args, **kwargs):
        raise _Stop

    staged = uncertainty_assembly.uncertainty_stage
    ustar_runs.fill_nee, ustar_runs.fill_and_partition = spy_fill, spy_run
    uncertainty_assembly.uncertainty_stage = stop
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            run()
    except _Stop:
        pass
    finally:
        ustar_runs.fill_nee, ustar_runs.fill_and_partition = real_fill, real_run
        uncertainty_assembly.uncertainty_stage = staged
    return calls[-1], thresholds[-1]


def refill(args, kwargs, target, **changes):
    """The central fill (its ``value`` and ``method`` and ``window_days`` columns) with
    `target` as the measured NEE, the same gaps filled, and `changes` to its conditions
    (``tair`` replaced) or config."""
    nee, conditions, index, is_night, config = args
    if "tair" in changes:
        conditions = conditions.assign(tair=changes.pop("tair"))
    if changes:
        config = dataclasses.replace(config, **changes)
    gaps = ~np.isfinite(nee)
    return method_settings.fill_nee(target, conditions, index, is_night, config, gaps=gaps,
                                    **kwargs)


def trial_module(name):
    """The trial script ``trial_<name>.py`` as a module (its ``SITES`` and ``simulate``)."""
    path = Path(__file__).resolve().parent / f"trial_{name}.py"
    spec = importlib.util.spec_from_file_location(f"trial_{name}", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


#: Night donors of the ``windy`` refill: u* at least this many times the record's threshold.
WINDY = 1.5


def planted_config(toml, truth):
    """The settings of `toml` with the u* threshold fixed at the planted one: the median
    over the truth's night records of its ``thr`` (as the trials' ``--planted-ustar``)."""
    threshold = float(np.median(truth["thr"].to_numpy()[truth["night"].to_numpy(dtype=bool)]))
    return dataclasses.replace(Config.from_toml(toml), ustar_method="fixed",
                               ustar_threshold=round(threshold, 4))


def trial_years(toml, truth, planted=False):
    """The rows of :func:`split_fill` for the run of a trial's `toml` (at the planted u*
    threshold where `planted`), one per complete budget year of its ``out/annual.parquet``
    (with its stated gap-filling bias and sigma)."""
    config = planted_config(toml, truth) if planted else None
    inputs = central_fill_inputs(lambda: process_site_config(toml, config))
    annual = pd.read_parquet(Path(toml).parent / "out" / "annual.parquet")
    years = [(year["year"], year["period_start"], year["period_end"],
              float(year["nee_uncertainty_gapfill_bias"]), float(year["nee_uncertainty_gapfill"]))
             for _, year in annual.iterrows() if year["complete"]]
    return split_fill(*inputs, truth, years)


def generated_years(seed):
    """The rows of :func:`split_fill` for the calibration set's generated site-year `seed`
    (:func:`fluxpart.scenarios.generate`, its step loss; night: the fill's night mask;
    no stated columns: the uncertainty stage is not run)."""
    site_year = scenarios.generate(seed)
    inputs = central_fill_inputs(lambda: process(site_year.frame, site_year.site))
    truth = site_year.truth.assign(share=site_year.measured_share,
                                   night=np.asarray(inputs[0][0][3], dtype=bool))
    index = site_year.frame.index
    return split_fill(*inputs, truth,
                      [(seed, index[0], index[-1] + (index[1] - index[0]), np.nan, np.nan)])


def split_fill(fill_inputs, threshold, truth, years):
    """One row per year of `years` (label, start, end, stated bias, stated sigma): the
    night fill error parts of the module docstring [g C m-2] of the central fill
    `fill_inputs` (:func:`central_fill_inputs`), the truth's columns ``nee``, ``share`` and
    ``night``; a year whose truth is incomplete is left out."""
    args, kwargs = fill_inputs
    nee, conditions, index, is_night, _ = args
    factor = (index[1] - index[0]).total_seconds() * GC_PER_UMOL
    truth = truth.reindex(index)
    true = truth["nee"].to_numpy(dtype=float)
    share = truth["share"].to_numpy(dtype=float)
    kept = np.isfinite(nee)
    ustar, applied = threshold
    calm = is_night & (ustar < WINDY * applied)
    clean = np.where(kept, true, np.nan)
    fills = {"fill": refill(args, kwargs, nee),
             "unlossed": refill(args, kwargs, np.where(kept, nee / share, np.nan)),
             "clean": refill(args, kwargs, clean),
             "mean": refill(args, kwargs, clean, gapfill_estimate="donor_mean"),
             "windy": refill(args, kwargs, np.where(calm, np.nan, nee)),
             "wsel": refill(args, kwargs, np.where(calm, np.nan, clean))}
    if "tsoil" in conditions and np.isfinite(conditions["tsoil"]).any():
        soil_air = np.where(is_night & np.isfinite(conditions["tsoil"]),
                            conditions["tsoil"], conditions["tair"])
        fills["soil"] = refill(args, kwargs, clean, tair=soil_air)
    near = ((fills["clean"]["method"] == 1) & (fills["clean"]["window_days"] <= 14)).to_numpy()
    night = truth["night"].to_numpy(dtype=bool)
    rows = []
    for label, start, end, stated, sigma in years:
        inside = (index >= start) & (index < end)
        if not np.isfinite(true[inside]).all():
            continue
        gap = inside & night & ~kept

        def err(name, where=gap):
            return factor * float(np.sum((fills[name]["value"].to_numpy() - true)[where]))

        lossy = inside & night & kept & (share < 0.99)
        rows.append({
            "year": label, "fill": err("fill"), "loss": err("fill") - err("unlossed"),
            "meas": err("unlossed") - err("clean"), "select": err("clean"),
            "sel7": err("clean", gap & near), "mean": err("mean"),
            "soil": err("soil") if "soil" in fills else np.nan,
            "windy": err("windy"), "wsel": err("wsel"), "stated": stated, "sigma": sigma,
            "lossy": 100 * lossy.sum() / max((inside & night & kept).sum(), 1),
            "lossm": 100 * float(np.mean(1 - share[lossy])) if lossy.any() else 0.0,
            "gaps": int(gap.sum())})
    return rows


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("trial", help="the trial's name, e.g. ninth (trial_ninth.py), or "
                                      "'generated' for the calibration set's site-years")
    parser.add_argument("folder", type=Path, nargs="?",
                        help="the trial's --out folder (not for 'generated')")
    parser.add_argument("--seeds", default="0-9",
                        help="'generated': the seeds, FIRST-LAST (default 0-9)")
    parser.add_argument("--runs", default="", help="site keys (default: every site)")
    parser.add_argument("--csv", type=Path, help="also write the rows here")
    parser.add_argument("--planted-ustar", action="store_true",
                        help="fill at the planted u* threshold (ustar_method = fixed; the "
                             "stated columns still the run's own)")
    options = parser.parse_args(argv)
    rows = []
    columns = ("fill", "loss", "meas", "select", "sel7", "mean", "soil", "windy", "wsel",
               "stated", "sigma", "lossy", "lossm")
    print(f"{'site-year':18s} " + " ".join(f"{c:>6s}" for c in columns) + "   gaps")

    def show(label, split):
        for row in split:
            row["site_year"] = f"{label}:{row.pop('year')}"
            rows.append(row)
            print(f"{row['site_year']:18s} " + " ".join(
                f"{row[c]:+6.1f}" for c in columns) + f" {row['gaps']:6d}", flush=True)

    if options.trial == "generated":
        first, last = (int(v) for v in options.seeds.split("-"))
        for seed in range(first, last + 1):
            show("cal", generated_years(seed))
    else:
        module = trial_module(options.trial)
        for key in options.runs.split(",") if options.runs else list(module.SITES):
            folder = options.folder / f"site_{key}"
            if not (folder / "out" / "annual.parquet").exists():
                continue
            _, truth = module.simulate(module.SITES[key], frozenset())
            for toml in sorted(folder.glob("*.toml")):
                try:
                    split = trial_years(toml, truth, options.planted_ustar)
                except FluxpartError as error:  # e.g. a 15-minute layout the trial refuses
                    print(f"{key} {toml.name}: skipped ({str(error)[:120]})")
                    continue
                show(f"{options.trial}:{key}", split)
    if not rows:
        return 1
    table = pd.DataFrame(rows)
    for name, statistic in (("mean", table.mean(numeric_only=True)),
                            ("median", table.median(numeric_only=True))):
        print(f"{name:18s} " + " ".join(f"{statistic[c]:+6.2f}" for c in columns))
    fill = table["fill"].to_numpy()
    sigma = table["sigma"].to_numpy(dtype=float)
    # generated site-years carry no stated columns: no share of them "within 1.96 sigma"
    stated = (f"stated bias against fill r = {np.corrcoef(table['stated'], fill)[0, 1]:.2f}; "
              f"|fill| within 1.96 sigma in {np.mean(np.abs(fill) <= 1.96 * sigma):.0%}"
              if np.isfinite(sigma).all() else "no stated columns")
    print(f"{len(table)} site-years; {stated}; loss negative "
          f"(< -0.1) in {np.mean(table['loss'] < -0.1):.0%}, select negative in "
          f"{np.mean(table['select'] < 0):.0%}")
    if options.csv:
        table.to_csv(options.csv, index=False)
    return 0


if __name__ == "__main__":
    sys.exit(main())
