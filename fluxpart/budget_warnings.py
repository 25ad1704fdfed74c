"""Warnings about a budget year's sums: partial years, unfilled NEE, NaN partitioned sums,
intervals that leave a part of the uncertainty out.

Pure functions of the annual table and the time series a run wrote (its orchestrator,
:func:`fluxpart.pipeline.process`, adds the texts to the run's warnings). A sum the budget
leaves NaN, or a year that is not a whole one, must not pass without a word: the annual
table's numbers are read as annual totals.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .measured_months import month_runs_text, unchecked_months

__all__ = ["budget_year_warnings", "held_span"]


def held_span(records, expected, interval: float) -> str:
    """How much of a budget year a partial year holds, as `run` and `check` say it.

    Parameters
    ----------
    records : int
        Records the budget year holds.
    expected : int or float
        Records of a whole budget year.
    interval : float
        Record length [min].

    Returns
    -------
    str
        ``"5.9 months"``; a few days, which read as 0.0 months, as ``"2.5 days"``.
    """
    months = 12.0 * records / expected
    return (f"{months:.1f} months" if months >= 0.1
            else f"{records * interval / 1440.0:.1f} days")


def budget_year_warnings(annual: pd.DataFrame, timeseries: pd.DataFrame, year_keys,
                         interval: float, config, fluxes, failed=()) -> list[str]:
    """The warnings of each budget year of `annual`.

    Parameters
    ----------
    annual : pandas.DataFrame
        Indexed by budget year: ``records``, ``records_expected``, ``records_unfilled``,
        ``period_start``, ``period_end``, ``nee`` and the partitioned sums [g C m-2].
    timeseries : pandas.DataFrame
        The run's records: ``nee_filled``, the partitioned fluxes and the filled drivers
        (``rg_filled`` ...) [their canonical units].
    year_keys : array_like of int
        Budget year of each record of `timeseries`.
    interval : float
        Record length [min].
    config : fluxpart.Config
        The run's settings (``year_start``, ``gapfill_min_donors``,
        ``gapfill_max_window_days``).
    fluxes : list of str
        The annual sums to name where NaN (``nee``, ``gpp_nighttime`` ...).
    failed : collection of str, optional
        Partitioning methods (``"nighttime"``, ``"daytime"``) that could not fit: their
        NaN sums are named by that method's own warning
        (:func:`fluxpart.method_failure.failure_warning`), not here.

    Returns
    -------
    list of str
        One text per finding: a partial year, NEE records left unfilled, partitioned sums
        NaN for want of a driver or parameters, months without a measured NEE record
        (their sums modelled; the intervals not checked there), uncertainty parts left out
        of the intervals (``uncertainty_parts_missing``).
    """
    keys = np.asarray(year_keys)
    out = []
    for key, row in annual.iterrows():
        year = key
        if config.year_start != "01-01":
            last = row["period_end"] - pd.Timedelta(days=1)
            year = f"budget year {key} ({row['period_start']:%Y-%m-%d} to {last:%Y-%m-%d})"
        if row["records"] < row["records_expected"]:
            held = held_span(row["records"], row["records_expected"], interval)
            out.append(f"{year} is a partial year ({int(row['records'])} of "
                       f"{int(row['records_expected'])} records, {held}): "
                       "its sums are not annual totals and are not scaled up")
        in_year = keys == key
        if row["records_unfilled"] > 0:
            out.append(_unfilled_warning(year, row, annual, timeseries, in_year, config, fluxes))
        out.extend(_modelled_sums_missing(year, row, timeseries, in_year, config, failed))
        out.extend(_unmeasured_months_warning(year, row, timeseries, in_year))
        out.extend(_uncertainty_parts_missing(year, row, config, failed))
    return out


def _unmeasured_months_warning(year, row, timeseries, in_year) -> list:
    """Name the months of a budget year that hold no measured NEE record.

    Such a year is ``complete`` in the annual table (every record present and filled)
    and its 95 % intervals are stated, yet its sums over those months are model output
    (:mod:`fluxpart.measured_months`); before round review30 only the gap-filling warning
    and ``share_measured`` told.
    """
    if "nee_fill_quality" not in timeseries.columns or not in_year.any():
        return []
    quality = timeseries["nee_fill_quality"].to_numpy()[in_year]
    stamps = timeseries.index[in_year]
    # months inside an outage longer than the intervals were checked on (round review31:
    # not a few hours of a month at a record's edge); every month of a year without any
    months = unchecked_months(stamps, quality == 0)
    if not months:
        return []
    where = f"({month_runs_text(months)})"
    # the annual table calls such a year complete (every record present and filled)
    complete = ", although the year is complete" if bool(row.get("complete", False)) else ""
    checked = ("the stated 95 % intervals' coverage was measured on site-years whose "
               "outages last up to three weeks (DEVELOPERS.md, calibration and outage "
               "benchmarks), not on such months: they are no calibrated interval for them "
               "(the daytime method's carry no gap-filling part, although its light "
               "responses there come from windows of other months)")
    if not (quality == 0).any():
        return [f"{year}: no measured NEE in any of its records {where}: every NEE value is "
                "filled from the records of other years, and its GPP and Reco rest on those "
                "fills and on parameters fitted elsewhere; its sums are model output, not a "
                f"measured budget{complete}; {checked} (share_measured "
                "0 in annual.parquet)"]
    keys = np.asarray(stamps.year, dtype=np.int64) * 12 + np.asarray(stamps.month) - 1
    inside = np.isin(keys, [month.year * 12 + month.month - 1 for month in months])
    total = np.unique(keys).size
    nee = (np.abs(timeseries["nee_filled"].to_numpy(dtype=float)[in_year])
           if "nee_filled" in timeseries.columns else np.full(stamps.size, np.nan))
    finite = np.isfinite(nee)
    share = (f", {100 * nee[inside & finite].sum() / nee[finite].sum():.0f} % of the "
             "year's sum of |NEE|" if finite.any() and nee[finite].sum() > 0 else "")
    return [f"{year}: {len(months)} of its {total} months hold no measured NEE {where}"
            f"{share}: their NEE is filled from the records of other months or years, and "
            "their GPP and Reco rest on those fills; the year's sums over them are model "
            f"output, not measured{complete}; {checked} "
            "(share_measured 0 in monthly.parquet)"]


def _uncertainty_parts_missing(year, row, config, failed=()) -> list:
    """Name the parts of the uncertainty a budget year's 95 % intervals leave out.

    A part that could not be estimated is NaN and left out of ``X_uncertainty_total``, so
    the year's ``X_ci95_low`` … ``X_ci95_high`` are narrower than the uncertainty is
    (``uncertainty_parts_missing`` in the annual table lists the parts).
    """
    parts = row.get("uncertainty_parts_missing")
    if not isinstance(parts, str) or not parts:
        return []
    if failed:
        # the method-failure warning names the between-method part it lacks, and the
        # failed method's own parts are NaN with its sums: only a part the standing
        # method's intervals lack is named here
        standing = [method for method in ("nighttime", "daytime") if method not in failed]
        has_parameters = all(np.isfinite(float(row.get(f"reco_{method}_uncertainty_parameters",
                                                        np.nan))) for method in standing)
        parts = ", ".join(part for part in parts.split(", ") if part != "partitioning"
                          and not (part == "parameters" and has_parameters))
        if not parts:
            return []
    causes = []
    if "ustar" in parts.split(", "):
        if config.ustar_method == "fixed":
            causes.append("a fixed u* threshold (ustar_method = \"fixed\") has no "
                          "bootstrap of its own uncertainty")
        elif config.ustar_bootstrap_draws == 0:
            causes.append("ustar_bootstrap_draws = 0 turns the u* threshold's bootstrap off")
        elif not config.ustar_scenarios:
            causes.append("ustar_scenarios = [] runs no u* scenario")
        elif set(config.ustar_scenarios) == {50}:
            # the median's standard-normal quantile is 0, the central run's: no span to
            # scale a spread by (fluxpart.uncertainty.ustar_sigma)
            causes.append("ustar_scenarios = [50] reruns only at the median threshold, "
                          "which spans no quantile beside the central run; add percentiles "
                          "on either side, e.g. [16, 50, 84]")
    cause = f" ({'; '.join(causes)})" if causes else ""
    return [f"{year}: the 95 % intervals leave out the {parts} part(s) of the uncertainty, "
            f"which could not be estimated{cause}: they understate the uncertainty of the "
            "year's sums (uncertainty_parts_missing in annual.parquet)"]


def _unfilled_warning(year, row, annual, timeseries, in_year, config, fluxes) -> str:
    """Name the NEE records of a budget year that gap filling left unfilled, and the NaN sums.

    A year with unfilled records holds every record but no total: its NEE sum, and each sum
    resting on an unfilled record, is NaN (:func:`fluxpart.budget.aggregate`).
    """
    unfilled = in_year & ~np.isfinite(timeseries["nee_filled"].to_numpy(dtype=float))
    stamps = timeseries.index[unfilled]
    span = (f", {stamps[0]:%Y-%m-%d %H:%M} .. {stamps[-1]:%Y-%m-%d %H:%M} (interval starts)"
            if stamps.size else "")
    fluxes = [name for name in fluxes if name in annual.columns and pd.isna(row[name])]
    sums = (f"its sums of {', '.join(fluxes)} are NaN, not totals" if fluxes
            else "its sums are not annual totals")
    return (f"{year}: {int(row['records_unfilled'])} records "
            f"({100 * row['records_unfilled'] / row['records_expected']:.2g} %) of NEE stay "
            "unfilled"
            f"{span}: no pass of gap filling found gapfill_min_donors = "
            f"{config.gapfill_min_donors} measured records for them, not even in the whole "
            "record (where a driver is missing or filled with quality B or C, only the mean "
            "diurnal course can fill: records of the same time of day, and for a night record "
            "night records of any hour); "
            f"{sums} (records_unfilled in annual.parquet)")


def _modelled_sums_missing(year, row, timeseries, in_year, config, failed=()) -> list:
    """Name the partitioned sums of a budget year that are NaN for want of a modelled value.

    Reco and GPP need their drivers at every record; where a driver stays unfilled (a gap
    farther than ``gapfill_max_window_days`` from any measured value) or a method has no
    parameters, the record's value and the year's sum are NaN. Nighttime GPP missing only
    because NEE stayed unfilled is named by :func:`_unfilled_warning`.
    """
    names = ["reco_nighttime", "gpp_daytime", "reco_daytime"]
    if np.isfinite(row["nee"]):
        names.insert(1, "gpp_nighttime")
    names = [name for name in names if name.split("_")[1] not in failed]
    missing = {name: int((in_year & ~np.isfinite(timeseries[name].to_numpy(dtype=float))).sum())
               for name in names if name in row.index and pd.isna(row[name])}
    if not missing:
        return []
    gaps = [f"{name} ({count} records)" for name in ("rg", "tair", "vpd", "tsoil")
            if f"{name}_filled" in timeseries.columns
            and (count := int((in_year & ~np.isfinite(timeseries[f"{name}_filled"].to_numpy(
                dtype=float))).sum()))]
    cause = (f"drivers left unfilled there, more than gapfill_max_window_days = "
             f"{config.gapfill_max_window_days:g} days from a measured value: {', '.join(gaps)}"
             if gaps else "no fitted parameters reach them")
    return [f"{year}: the sums of {', '.join(missing)} are NaN, not totals: "
            + ", ".join(f"{name} lacks {count} records" for name, count in missing.items())
            + f" ({cause})"]
