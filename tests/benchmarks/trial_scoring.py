"""Scoring shared by the independent known-truth trials (``trial_third.py`` to
``trial_nineteenth.py``).

Only the scoring is shared (and, since ``trial_eighteenth.py``, the command line and the
loop over a run's budget years; since ``trial_nineteenth.py`` the loop over the sites,
``run_sites``, and the scoring of a run's budget years, ``score_budget_years``; since ``trial_twentysecond.py`` the fill errors by rain gap and
power outage, ``rain_outage_fill_parts``; since ``trial_twentythird.py`` and
``trial_twentyfourth.py`` the list of misses with z, ``print_misses_z`` (first written for
trial 22), and the writer of a site's logger CSV and TOML, ``write_logger_site``; since
``trial_twentyeighth.py`` the generators' generic numerics ``ar1``, ``lagged``, ``ramp`` and
``runs_mask``, taken out of trials 25-27 unchanged; since ``trial_thirtieth.py`` the site
fields ``LoggerSite``, the scorer ``score_rain_outage`` and the note ``flux_note``): each trial
keeps its own weather, flux physics and file layouts, so that the trials stay independent
of each other and of ``fluxpart.scenarios``.

The targets are those of issue 11: a 95 % interval that holds the truth, |annual NEE error|
<= 15 g C m-2, nighttime GPP and Reco within 5 %, daytime within 8 %, the u* threshold within
20 % of the planted one.
"""
from __future__ import annotations

import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.signal import lfilter

FLUXES = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")
TRUTH_OF = {"nee": "nee", "gpp_nighttime": "gpp", "reco_nighttime": "reco",
            "gpp_daytime": "gpp", "reco_daytime": "reco"}
REL_TARGET = {"gpp_nighttime": 5.0, "reco_nighttime": 5.0, "gpp_daytime": 8.0,
              "reco_daytime": 8.0}


def flux_scores(annual_row, truth_part, factor) -> dict:
    """Each flux's estimate, truth, error (also in % of |truth|; NaN where the truth is 0),
    whether the stated 95 % interval holds the truth, and the interval's half-width, for one
    budget year.

    `annual_row`: a row of ``annual.parquet``; `truth_part`: the true fluxes of its records
    [umol m-2 s-1] (columns as ``TRUTH_OF``); `factor`: g C m-2 per umol m-2 s-1 record.
    A truth with a missing value, or no record, for the year raises ``ValueError``: its sum
    would score the year against part of its truth.
    """
    row = {}
    for f in FLUXES:
        values = np.asarray(truth_part[TRUTH_OF[f]], dtype=float)
        if values.size == 0 or not np.isfinite(values).all():
            raise ValueError(f"truth of {TRUTH_OF[f]}: {values.size} records, "
                             f"{int((~np.isfinite(values)).sum())} of them missing")
        est = float(annual_row[f])
        true = float(truth_part[TRUTH_OF[f]].sum() * factor)
        lo, hi = float(annual_row[f + "_ci95_low"]), float(annual_row[f + "_ci95_high"])
        row.update({f: est, f + "_true": true, f + "_err": est - true,
                    f + "_rel": 100 * (est - true) / abs(true) if true else float("nan"),
                    f + "_in": lo <= true <= hi, f + "_halfwidth": (hi - lo) / 2})
    return row


def fluxpart_cli(*args, cwd):
    """Run ``python -m fluxpart ARGS`` of this repository in `cwd` as a user would."""
    env = dict(os.environ)
    root = str(Path(__file__).resolve().parents[2])
    env["PYTHONPATH"] = root + os.pathsep + env.get("PYTHONPATH", "")
    cmd = [sys.executable, "-m", "fluxpart", *args]
    return subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True)


def misses(row):
    """The targets a scored row (keys ``<flux>_in``, ``_rel``, ``nee_err``, ``ustar_rel``) misses."""
    out = []
    for f in FLUXES:
        if not row[f + "_in"]:
            out.append(f"{f} outside 95 % interval")
    if abs(row["nee_err"]) > 15:
        out.append("|NEE error| > 15")
    for f, lim in REL_TARGET.items():
        if abs(row[f + "_rel"]) > lim:
            out.append(f"{f} {row[f + '_rel']:+.1f} %")
    if abs(row["ustar_rel"]) > 20:
        out.append(f"u* {row['ustar_rel']:+.0f} %")
    return out


def print_flux_summary(rows):
    """Print coverage, errors and within-target counts per flux over the scored rows."""
    n = len(rows)
    print(f"\n{n} site-years")
    for f in FLUXES:
        cov = np.mean([r[f + "_in"] for r in rows])
        ratio = np.median([abs(r[f + "_err"]) / (r[f + "_halfwidth"] / 1.96) for r in rows])
        print(f"  {f:15s} coverage {100 * cov:5.1f} %  median |err| "
              f"{np.median([abs(r[f + '_err']) for r in rows]):6.1f} g C m-2  median |rel| "
              f"{np.median([abs(r[f + '_rel']) for r in rows]):5.1f} %  median |err|/sigma "
              f"{ratio:.2f}")
    errs = np.abs([r["nee_err"] for r in rows])
    print(f"  |NEE err| median {np.median(errs):.1f}, worst {errs.max():.1f} g C m-2; "
          f"within 15: {int((errs <= 15).sum())} of {n}; within 5: {int((errs <= 5).sum())}")
    for f, lim in REL_TARGET.items():
        print(f"  {f} within {lim:.0f} %: {sum(abs(r[f + '_rel']) <= lim for r in rows)} of {n}")
    print(f"  u* within 20 %: {sum(abs(r['ustar_rel']) <= 20 for r in rows)} of {n}; median "
          f"{np.median([r['ustar_rel'] for r in rows]):+.1f} %")


def check_and_run(config_name, folder, out_name, title):
    """``fluxpart check`` then ``fluxpart run`` of a written site-year, as a user would.

    Prints the check's exit code and first problems under `title`; returns the check's
    completed process and the run's, or ``None`` for the run where it failed.
    """
    check = fluxpart_cli("check", config_name, cwd=folder)
    lines = check.stdout.splitlines()
    head = [i for i, ln in enumerate(lines) if ln.startswith("problems found")]
    problems = lines[head[0]:] if head else check.stderr.splitlines()
    problems = problems[:problems.index("")] if "" in problems else problems
    print(f"\n## {title}: check exit {check.returncode}")
    for ln in problems[:12]:
        print(f"   check: {ln[:200]}")
    run = fluxpart_cli("run", config_name, "--out", out_name, "--quiet", cwd=folder)
    if run.returncode != 0:
        print(f"   RUN FAILED (exit {run.returncode}): {run.stderr.strip()[-800:]}")
        return check, None
    return check, run


def save_scores(rows, out):
    """Write the scored rows (without their warnings) to ``out/scores.csv``."""
    import pandas as pd

    keep = [{k: v for k, v in r.items() if k != "warnings"} for r in rows]
    pd.DataFrame(keep).to_csv(Path(out) / "scores.csv", index=False)


def print_flux_table(row):
    """Print a scored row's estimate, truth, error and interval per flux."""
    print(f"   {'flux':15s} {'est':>9s} {'truth':>9s} {'err':>8s} {'rel %':>7s} "
          f"{'+-95%':>7s} in")
    for f in FLUXES:
        print(f"   {f:15s} {row[f]:9.1f} {row[f + '_true']:9.1f} {row[f + '_err']:+8.1f} "
              f"{row[f + '_rel']:+7.1f} {row[f + '_halfwidth']:7.1f} "
              f"{'yes' if row[f + '_in'] else 'NO'}")


def print_warnings_and_misses(row):
    """Print the check's exit code, the run's warnings and the targets the row misses."""
    print(f"   check exit {row['check_rc']}; warnings ({len(row['warnings'])}):")
    for w in row["warnings"]:
        print(f"     - {w[:230]}")
    m = misses(row)
    print(f"   MISSES: {'; '.join(m) if m else 'none'}")


def summary_header(width):
    """The summary table's first columns: site-year and each flux's error and coverage."""
    return (f"\n=========== summary (FICTIONAL sites) ===========\n{'site-year':{width}s} "
            f"{'NEE err':>8s} {'in':>3s} {'GPPn %':>7s} {'in':>3s} {'Recn %':>7s} {'in':>3s} "
            f"{'GPPd %':>7s} {'in':>3s} {'Recd %':>7s} {'in':>3s}")


def summary_cells(r, width):
    """A row's first summary cells (the columns of :func:`summary_header`)."""
    yn = {f: "y" if r[f + "_in"] else "N" for f in FLUXES}.get
    return (f"{r['site_year']:{width}s} {r['nee_err']:+8.1f} {yn('nee'):>3s} "
            f"{r['gpp_nighttime_rel']:+7.1f} {yn('gpp_nighttime'):>3s} "
            f"{r['reco_nighttime_rel']:+7.1f} {yn('reco_nighttime'):>3s} "
            f"{r['gpp_daytime_rel']:+7.1f} {yn('gpp_daytime'):>3s} "
            f"{r['reco_daytime_rel']:+7.1f} {yn('reco_daytime'):>3s}")


def print_table(rows):
    """Per flux: median and worst |error| (g C m-2, %), coverage, median |error| / sigma."""
    print(f"\n{len(rows)} complete site-years")
    print(f"{'flux':15s} {'med|err|':>9s} {'worst':>8s} {'med|%|':>7s} {'worst%':>7s} "
          f"{'in 95%':>7s} {'|err|/sig':>9s} {'in target':>9s}")
    for f in FLUXES:
        err = np.abs([r[f + "_err"] for r in rows])
        rel = np.abs([r[f + "_rel"] for r in rows])
        ratio = np.median([abs(r[f + "_err"]) / max(r[f + "_halfwidth"] / 1.96, 1e-9)
                           for r in rows])
        inside = sum(bool(r[f + "_in"]) for r in rows)
        target = int((err <= 15).sum()) if f == "nee" else int(
            (rel <= {"gpp_nighttime": 5, "reco_nighttime": 5}.get(f, 8)).sum())
        print(f"{f:15s} {np.median(err):9.1f} {err.max():8.1f} {np.median(rel):7.1f} "
              f"{rel.max():7.1f} {inside:4d}/{len(rows):<2d} {ratio:9.2f} {target:6d}/{len(rows)}")
    us = [abs(r["ustar_rel"]) <= 20 for r in rows]
    print(f"u* within 20 %: {sum(us)} of {len(rows)}; median "
          f"{np.median([r['ustar_rel'] for r in rows]):+.1f} %")


def finish(rows, out):
    """Save the scores, print the summary table of the complete site-years; the exit code
    (1 where no site-year is complete)."""
    scored = [r for r in rows if r["complete"]]
    if not scored:
        return 1
    save_scores(rows, out)
    width = max(len(r["site_year"]) for r in scored) + 1
    print(summary_header(width) + f" {'u* %':>6s}")
    for r in scored:
        print(summary_cells(r, width) + f" {r['ustar_rel']:+6.0f}")
    print_table(scored)
    return 0


def fmt(values, decimals, code):
    """Numbers as text with a fixed number of decimals; NaN as the missing code."""
    v = np.asarray(values, float)
    out = np.char.mod(f"%.{decimals}f", np.nan_to_num(v))
    return np.where(np.isnan(v), code, out)


def site_toml(site, extra_input: str, columns: str, units: str = "", processing: str = "",
              *, writer: str) -> str:
    """A trial site's config: `site` has name, lat, lon, utc_offset, canopy and year_start;
    `writer` is the trial script's file name, written in the header comment."""
    units_block = f"\n[input.units]\n{units}" if units else ""
    return f"""# FICTIONAL site written by tests/benchmarks/{writer} (invented data)
[site]
name = "{site.name}"
latitude = {site.lat}
longitude = {site.lon}
utc_offset = {site.utc_offset}
canopy = "{site.canopy}"

[input]
{extra_input}
[input.columns]
{columns}{units_block}
[processing]
seed = 0
year_start = "{site.year_start}"
{processing}"""


def trial_parser(description, default_out, variants):
    """The command line every trial shares: ``--out``, ``--runs`` (default: every site of
    the caller, filled in by the caller), ``--variant`` (from `variants`),
    ``--planted-ustar``, ``--processing`` and ``--seed-offset``."""
    import argparse

    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--out", type=Path, default=Path(default_out))
    parser.add_argument("--runs", default="")
    parser.add_argument("--variant", default="",
                        help=f"comma-separated diagnosis switches: {', '.join(variants)}")
    parser.add_argument("--planted-ustar", action="store_true",
                        help="run with the planted u* threshold (ustar_method = fixed)")
    parser.add_argument("--processing", default="",
                        help="extra [processing] lines for every site's TOML")
    parser.add_argument("--seed-offset", type=int, default=0,
                        help="draw the weather, noise and gaps again (0: the documented draw)")
    return parser


def chosen_variant(parser, options, variants) -> frozenset:
    """The ``--variant`` switches as a set; an unknown one is a parser error."""
    variant = frozenset(v for v in options.variant.split(",") if v)
    if variant - set(variants):
        parser.error(f"unknown --variant {sorted(variant - set(variants))}")
    return variant


def processing_text(options, truth) -> str:
    """``--processing`` lines plus, with ``--planted-ustar``, the fixed threshold: the
    median over the night records (`truth` columns ``night`` and ``thr``) of the planted
    record thresholds."""
    processing = options.processing.replace("\\n", "\n")
    if options.planted_ustar:
        thr = float(np.median(truth.thr.to_numpy()[truth.night.to_numpy()]))
        processing += f'\nustar_method = "fixed"\nustar_threshold = {thr:.4f}\n'
    return processing + ("\n" if processing and not processing.endswith("\n") else "")


def run_warnings(run, seconds, shown=14):
    """Print the first `shown` non-empty lines a run wrote; return all of them."""
    warns = [ln for ln in run.stdout.splitlines() + run.stderr.splitlines() if ln.strip()]
    print(f"   run: {len(warns)} lines of warnings ({seconds:.0f} s)")
    for ln in warns[:shown]:
        print(f"     {ln[:230]}")
    return warns


def budget_years(out, truth, key, check):
    """Each budget year of a run's ``annual.parquet``: its row, the truth of its records,
    the run's time series on them (None where the year is incomplete or has no truth) and
    the score row begun with its site-year, period and completeness."""
    import pandas as pd

    annual = pd.read_parquet(Path(out) / "annual.parquet")
    series = pd.read_parquet(Path(out) / "timeseries.parquet").set_index("time")
    for _, a in annual.iterrows():
        start, end = pd.Timestamp(a["period_start"]), pd.Timestamp(a["period_end"])
        part = truth[(truth.index >= start) & (truth.index < end)]
        row = {"site_year": f"{key}:{a['year']}", "run": key, "year": a["year"],
               "complete": bool(a["complete"]), "check_rc": check.returncode,
               "period": f"{start:%Y-%m-%d}..{end:%Y-%m-%d}"}
        usable = not part.empty and row["complete"]
        yield a, part, (series.reindex(part.index) if usable else None), row


def night_day_errors(series, truth_part, night, factor) -> dict:
    """Each partitioned flux's error [g C m-2] summed over the night records and over the
    day records (`night` a boolean mask of the records) as ``<flux>_err_night`` and
    ``<flux>_err_day``."""
    out = {}
    for f in FLUXES[1:]:
        diff = series[f].to_numpy() - truth_part[TRUTH_OF[f]].to_numpy()
        out[f + "_err_night"] = factor * np.nansum(diff[night])
        out[f + "_err_day"] = factor * np.nansum(diff[~night])
    return out


def record_scores(series, truth_part, factor) -> dict:
    """The u* threshold found (median over the night records of the run's time series)
    against the planted one (median of the truth's ``thr`` over them), the share of records
    without measured NEE and the NEE error [g C m-2] of the kept records, with the part of
    it that the planted u* loss left in them (truth columns ``night``, ``thr``, ``share``,
    ``nee``)."""
    night = truth_part.night.to_numpy().astype(bool)
    found = float(np.nanmedian(series["ustar_threshold"].to_numpy()[night]))
    planted = float(np.median(truth_part.thr.to_numpy()[night]))
    kept = series["nee_fill_method"].to_numpy() == "measured"
    est, true = series["nee_filled"].to_numpy(), truth_part.nee.to_numpy()
    return {"ustar_found": found, "ustar_planted": planted,
            "ustar_rel": 100 * (found - planted) / planted,
            "err_kept": factor * np.nansum((est - true)[kept]),
            "err_kept_loss": factor * np.nansum(((truth_part.share.to_numpy() - 1)
                                                 * true)[kept])}


def run_sites(options, sites, simulate, write_site, score, print_row, variant=frozenset()):
    """The trials' main loop: for each site of ``options.runs`` (default: all of `sites`)
    simulate, write, ``check`` and ``run`` it, score and print its budget years; then the
    summary. Returns the exit code of :func:`finish`.

    ``simulate(site, variant, seed_offset) -> (data, truth)`` (truth ``attrs["note"]``),
    ``write_site(site, data, folder, processing) -> toml name``, ``score(site, truth, out,
    check) -> rows``, ``print_row(row)``.
    """
    import time

    options.out.mkdir(parents=True, exist_ok=True)
    rows = []
    t0 = time.perf_counter()
    for key in (options.runs or ",".join(sites)).split(","):
        site = sites[key]
        data, truth = simulate(site, variant, options.seed_offset)
        folder = options.out / f"site_{key}"
        toml_name = write_site(site, data, folder, processing_text(options, truth))
        print(f"\n   {key} planted: {truth.attrs['note']}")
        check, run = check_and_run(toml_name, folder, "out", f"{key} {site.name}")
        if run is None:
            continue
        warns = run_warnings(run, time.perf_counter() - t0)
        for row in score(site, truth, folder / "out", check):
            row["warnings"] = warns
            print_row(row)
            rows.append(row)
    code = finish(rows, options.out)
    print(f"({time.perf_counter() - t0:.0f} s)")
    return code


def score_budget_years(out, truth, key, check, factor, own_parts):
    """Score every budget year of a run (see :func:`budget_years`): a complete one gets
    :func:`flux_scores`, :func:`record_scores`, the trial's own error parts
    (``own_parts(truth_part, series, row)`` updates `row`) and :func:`night_day_errors`;
    an incomplete one keeps its site-year, period and completeness only."""
    rows = []
    for annual_row, part, series, row in budget_years(out, truth, key, check):
        if series is not None:
            row.update(flux_scores(annual_row, part, factor))
            row.update(record_scores(series, part, factor))
            own_parts(part, series, row)
            night = part.night.to_numpy().astype(bool)
            row.update(night_day_errors(series, part, night, factor))
        rows.append(row)
    return rows


def fill_errors(part, series, groups) -> dict:
    """The share of records without measured NEE (``gap_share``), the NEE error [g C m-2]
    of the filled records in each group (``err_fill_<name>``; `groups` maps a name to a
    boolean mask of the records) and the number of records left unfilled (``unfilled``).

    `part`: the truth of a budget year (column ``nee``, umol m-2 s-1, a regular index);
    `series`: the run's time series on its records (``nee_filled``, ``nee_fill_method``).
    """
    factor = 12.011e-6 * (part.index[1] - part.index[0]).total_seconds()
    filled = series["nee_fill_method"].to_numpy() != "measured"
    err = series["nee_filled"].to_numpy() - part.nee.to_numpy()
    out = {"gap_share": float(np.mean(filled)), "unfilled": int(np.isnan(err).sum())}
    for name, mask in groups.items():
        out[f"err_fill_{name}"] = factor * np.nansum(err[filled & np.asarray(mask, bool)])
    return out


def print_scored_row(row, fills):
    """Print a scored row: its u* threshold, flux table, the NEE error of the kept records
    and then `fills` (the trial's own text on the filled ones), the night/day split of the
    partitioned fluxes and the targets missed; an incomplete year in one line."""
    if "nee" not in row:
        print(f"\n-- {row['site_year']} ({row['period']}): not complete, not scored")
        return
    print(f"\n-- {row['site_year']} ({row['period']}, NEE not measured "
          f"{100 * row['gap_share']:.0f} %) u* found {row['ustar_found']:.3f} planted "
          f"{row['ustar_planted']:.3f} ({row['ustar_rel']:+.0f} %)")
    print_flux_table(row)
    print(f"   NEE error by records: kept {row['err_kept']:+.1f} (u* loss left in them "
          f"{row['err_kept_loss']:+.1f}); {fills}"
          + (f"; {row['unfilled']} records unfilled" if row["unfilled"] else ""))
    print("   by night/day records: " + "; ".join(
        f"{f} {row[f + '_err_night']:+.1f}/{row[f + '_err_day']:+.1f}" for f in FLUXES[1:]))
    m = misses(row)
    print(f"   MISSES: {'; '.join(m) if m else 'none'}")


def rain_outage_fill_parts(part, series, row):
    """The NEE error [g C m-2] of the filled records by night and by day outside the rain
    gaps and the outages of every sensor, in the rain gaps and in those outages (truth
    columns ``night``, ``outage``, ``rain``; see :func:`fill_errors`); updates `row`."""
    night = part.night.to_numpy().astype(bool)
    out = part.outage.to_numpy().astype(bool)
    rain = part.rain.to_numpy().astype(bool)
    rest = ~out & ~rain
    row.update(fill_errors(part, series, {"night": night & rest, "day": ~night & rest,
                                          "rain": rain, "outage": out}))


def print_rain_outage_row(row):
    """:func:`print_scored_row` with the fill errors of :func:`rain_outage_fill_parts`."""
    fills = ""
    if "nee" in row:
        fills = (f"filled night {row['err_fill_night']:+.1f}, day {row['err_fill_day']:+.1f}, "
                 f"rain {row['err_fill_rain']:+.1f}, power outage {row['err_fill_outage']:+.1f}")
    print_scored_row(row, fills)


#: Decimals a trial's logger writes per variable in fluxpart's units.
LOGGER_DECIMALS = {"nee": 3, "rg": 1, "tair": 2, "rh": 1, "vpd": 2, "ustar": 3, "tsoil": 2}


def write_logger_site(site, data, folder, layout, to_unit, processing="", events=(), *,
                      writer, csv_suffix="_logger.csv"):
    """Write a trial site's logger CSV and TOML; return the TOML's path.

    `layout`: (time column, stamp format, which end of the interval the stamp marks
    ("start" | "end"), missing code, {variable: column}, {variable: unit}); `to_unit`:
    {unit: (conversion from fluxpart's unit, decimals added to ``LOGGER_DECIMALS``)};
    `data`: the logger's variables in fluxpart's units indexed by record start; `events`:
    dates declared as ``events``. A missing code "" or "NaN" is not declared (the reader
    knows both), a text code is declared as text (an undeclared "NA" is refused, exit 2),
    a number as a number.
    """
    import pandas as pd

    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    time_col, stamp, marks, code, names, units = layout
    step = data.index[1] - data.index[0]
    times = data.index + (step if marks == "end" else pd.Timedelta(0))
    frame = pd.DataFrame({time_col: times.strftime(stamp)})
    for var, col in names.items():
        convert, extra = to_unit[units[var]] if var in units else (lambda v: v, 0)
        frame[col] = fmt(convert(data[var]), LOGGER_DECIMALS[var] + extra, code)
    if events:
        processing = f"events = {list(events)!r}\n".replace("'", '"') + processing
    csv = f"{site.key.lower()}{csv_suffix}"
    frame.to_csv(folder / csv, index=False)
    missing = "" if code in ("", "NaN") else f"missing = [{code}]\n"
    if missing and not code.lstrip("-").replace(".", "", 1).isdigit():
        missing = f'missing = ["{code}"]\n'
    config = site_toml(site, f'path = "{csv}"\ntime_column = "{time_col}"\n'
                       f'time_format = "{stamp}"\ntime_marks = "{marks}"\n{missing}',
                       "".join(f'{var} = "{col}"\n' for var, col in names.items()),
                       "".join(f'{var} = "{u}"\n' for var, u in units.items()), processing,
                       writer=writer)
    path = folder / f"site_{site.key}.toml"
    path.write_text(config)
    return path


def print_misses_z(rows):
    """Every flux outside its 95 % interval with z = error / (half-width / 1.96)."""
    print("\nmisses of the 95 % interval (z = error / (half-width / 1.96)):")
    for r in rows:
        if "nee" not in r:
            continue
        for f in FLUXES:
            if not r[f + "_in"]:
                z = r[f + "_err"] / max(r[f + "_halfwidth"] / 1.96, 1e-9)
                print(f"  {r['site_year']:9s} {f:15s} err {r[f + '_err']:+8.1f} "
                      f"({r[f + '_rel']:+6.1f} %) +-{r[f + '_halfwidth']:6.1f}  z {z:+5.2f}")


def trial_main(argv, doc, default_out, variants, sites, simulate, write_site, score,
               print_row):
    """A trial's whole command line (since ``trial_twentysixth.py``): parse it
    (:func:`trial_parser`, the first line of `doc` as description), :func:`run_sites`, then
    :func:`print_misses_z` of the complete site-years in ``scores.csv``; the exit code."""
    import pandas as pd

    parser = trial_parser(doc.splitlines()[0], default_out, variants)
    options = parser.parse_args(argv)
    code = run_sites(options, sites, simulate, write_site, score, print_row,
                     chosen_variant(parser, options, variants))
    path = options.out / "scores.csv"
    if path.exists():
        rows = pd.read_csv(path)
        print_misses_z(rows[rows["complete"]].to_dict("records"))
    return code


# ----------------------------------------------------------------- generators' numerics
# Generic numeric helpers of the trials' generators (since trial_twentyeighth.py): red
# noise, a first-order lag, a linear ramp and runs of records. No physics: each trial
# keeps its own weather and fluxes.


def ar1(rng, size, rho):
    """Unit-variance red noise of `size` steps, lag-one correlation `rho`."""
    return lfilter([np.sqrt(1 - rho * rho)], [1.0, -rho], rng.standard_normal(size))


def lagged(x, tau):
    """`x` through a first-order filter of time constant `tau` steps, started at x[0]."""
    a = 1.0 - np.exp(-1.0 / tau)
    y, _ = lfilter([a], [1.0, a - 1.0], x, zi=[(1 - a) * x[0]])
    return y


def ramp(x, lo, hi):
    """0 at or below `lo`, 1 at or above `hi`, linear between."""
    return np.clip((np.asarray(x, float) - lo) / (hi - lo), 0.0, 1.0)


def runs_mask(n, starts, lengths):
    """A boolean mask of `n` records true on [start, start + length) of each run."""
    mask = np.zeros(n, bool)
    for s, ln in zip(starts, lengths, strict=True):
        mask[max(int(s), 0):max(int(s) + int(ln), 0)] = True
    return mask


# ----------------------------------------------------------------- a site's logger fields
# Since trial_thirtieth.py: the fields every trial site carries for its TOML and its record
# span (a trial's own ``Site`` adds its climate and physics after them).


@dataclass(frozen=True)
class LoggerSite:
    """A trial site's identity and record span: `key` (one letter), `name`, `lat`, `lon`
    [deg], `utc_offset` [h], `canopy` ("tall" | "short"), `step` [min], the records from
    `start` to `end` (dates, end excluded) and the budget years from `year_start`
    ("MM-DD")."""

    key: str
    name: str
    lat: float
    lon: float
    utc_offset: float
    canopy: str
    step: int
    start: str
    end: str
    year_start: str


def score_rain_outage(site, truth, out, check):
    """:func:`score_budget_years` of a run with :func:`rain_outage_fill_parts`, the records
    `site.step` minutes long (g C m-2 per umol m-2 s-1 record: step x 60 s x 12.011e-6)."""
    return score_budget_years(out, truth, site.key, check, site.step * 60 * 12.011e-6,
                              rain_outage_fill_parts)


def flux_note(gpp, reco, share, night, dim, factor, events=()) -> str:
    """The closing text of a trial's planted note: the share of the night Reco lost to the
    u* loss (`share` the measured share per record), annual GPP and Reco and the GPP of the
    dim records (`dim` a mask) [g C m-2, `factor` per umol m-2 s-1 record] and the events."""
    lost = 1 - (share * reco)[night].sum() / reco[night].sum()
    return (f"u* loss share of night Reco {lost:.0%}; GPP {gpp.sum() * factor:.0f}, Reco "
            f"{reco.sum() * factor:.0f} g C m-2; GPP in Rg < 10 W m-2 "
            f"{gpp[dim].sum() * factor:.1f} g C m-2"
            + (f"; events {', '.join(events)}" if events else ""))
