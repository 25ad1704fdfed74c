"""Carbon budgets: per-record fluxes summed to days, months and calendar years.

Fluxes in µmol CO2 m-2 s-1 are converted to grams of carbon per square metre per
record and summed over each period, beside coverage figures that tell how much
of the period was measured, gap-filled (by quality class) or missing.

Caution: a tower budget is one input to carbon-credit quantification, not a
certified credit. Coverage, gap filling, partitioning and the u* threshold all
carry uncertainty; the applicable crediting methodology and accredited
verification decide how (and whether) such numbers may be used.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .budget_calendar import budget_year_numbers
from .errors import (
    FluxpartError,
    ImplausibleValueError,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)

# The unit conversions live in fluxpart.units; re-exported here for existing callers.
from .units import GRAMS_CARBON_PER_UMOL, flux_to_carbon
from .units import interval_seconds as _interval_seconds

__all__ = [
    "COVERAGE_UNITS",
    "GRAMS_CARBON_PER_UMOL",
    "Budgets",
    "aggregate",
    "default_flux_names",
    "flux_to_carbon",
]

#: Units of the coverage columns of every budget table.
COVERAGE_UNITS = {
    "records": "1",
    "records_expected": "1",
    "records_unfilled": "1",
    "complete": "1",
    "share_measured": "1",
    "share_filled_a": "1",
    "share_filled_b": "1",
    "share_filled_c": "1",
    "share_unfilled": "1",
    "nee_share_from_filled": "1",
}

_MINUTES_PER_DAY = 1440
_QUALITY_CODES = {-1: "share_unfilled", 0: "share_measured", 1: "share_filled_a",
                  2: "share_filled_b", 3: "share_filled_c"}
_NEE_INPUT = "nee_filled"
_NEE_OUTPUT = "nee"
_PARTITION_PREFIXES = ("gpp_", "reco_")


@dataclass(frozen=True)
class Budgets:
    """Daily, monthly and annual carbon budgets.

    Attributes
    ----------
    daily : pandas.DataFrame
        One row per calendar day (DatetimeIndex named ``date``).
    monthly : pandas.DataFrame
        One row per calendar month (DatetimeIndex of month starts, named ``month``).
    annual : pandas.DataFrame
        One row per budget year (int index named ``year``: the calendar year in
        which it starts; ``period_start`` and ``period_end`` columns).
    units : dict
        Unit of every column: ``"g C m-2"`` for the flux sums (per period), ``"1"``
        for counts, flags and shares.

    Notes
    -----
    Columns of each table: the flux sums [g C m-2 per period] named by the flux
    mapping (``nee``, ``gpp_nighttime``, ``reco_nighttime``, ...), then
    ``records``, ``records_expected``, ``records_unfilled``, ``complete``,
    ``share_measured``, ``share_filled_a``, ``share_filled_b``,
    ``share_filled_c``, ``share_unfilled`` and ``nee_share_from_filled``; see
    :func:`aggregate`.
    """

    daily: pd.DataFrame
    monthly: pd.DataFrame
    annual: pd.DataFrame
    units: dict


def default_flux_names(columns) -> dict[str, str]:
    """Map the flux columns of a timeseries to their budget column names.

    Parameters
    ----------
    columns : iterable of str
        Column names of the timeseries.

    Returns
    -------
    dict
        ``{"nee_filled": "nee"}`` plus every column starting with ``gpp_`` or
        ``reco_`` mapped to itself, in the order of `columns`.
    """
    mapping = {_NEE_INPUT: _NEE_OUTPUT}
    for name in columns:
        if isinstance(name, str) and name.startswith(_PARTITION_PREFIXES):
            mapping[name] = name
    return mapping


def aggregate(timeseries: pd.DataFrame, interval_minutes, *, fluxes=None,
              quality_column="nee_fill_quality", year_start="01-01") -> Budgets:
    """Sum fluxes to daily, monthly and annual carbon budgets with coverage.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        One row per record; a DatetimeIndex of interval starts in local standard
        time. Flux columns in [µmol m-2 s-1]; `quality_column` holds the NEE fill
        quality: 0 measured, 1/2/3 filled with quality A/B/C, -1 unfilled.
    interval_minutes : int
        Record length [min], 30 or 60 (any whole divisor of a day works).
    fluxes : mapping or sequence of str, optional
        Flux columns to sum. A mapping ``{input column: output name}``; a sequence
        of input columns (``nee_filled`` becomes ``nee``, others keep their
        name); ``None`` (default) takes ``nee_filled`` and every ``gpp_*`` and
        ``reco_*`` column present (:func:`default_flux_names`).
    quality_column : str, optional
        Name of the NEE fill-quality column; default ``"nee_fill_quality"``.
    year_start : str, optional
        First day of the budget year as ``"MM-DD"``; default ``"01-01"`` (calendar
        years). See :func:`fluxpart.budget_calendar.budget_years`.

    Returns
    -------
    Budgets
        ``daily``, ``monthly`` and ``annual`` tables and their units.

    Raises
    ------
    MissingColumnError
        If a flux or the quality column is absent.
    ImplausibleValueError
        If a quality code is not one of -1, 0, 1, 2, 3 (the row is named).
    SpacingError
        If timestamps are not increasing multiples of `interval_minutes` apart.
    FluxpartError
        If the index is not a DatetimeIndex.

    Notes
    -----
    A day, month or year is the set of intervals that start in it (calendar
    days and months of local standard time; budget years from `year_start`).
    Every period between the first and the last record appears, including
    periods without any row. The annual table is indexed by ``year``, the
    calendar year in which the budget year starts, and gives its first day
    ``period_start`` and the first day of the next, ``period_end``.

    - Flux sums [g C m-2]: ``Σ flux x interval seconds x 12.011e-6``. If any record
      of a flux is NaN in the period the sum is NaN; a missing value is never
      counted as zero. Missing rows do not make the sum NaN but make the period
      incomplete. Partial periods are never scaled up.
    - ``records``: rows present; ``records_expected``: the full period at this
      interval by the calendar (a day at 30 min: 48; February 2024: 1392; a leap
      year: 17,568; a budget year counts the days from its start to the next
      start, 29 February included); ``records_unfilled``: rows whose NEE is NaN or has quality -1.
    - ``complete``: ``records == records_expected`` and ``records_unfilled == 0``.
    - ``share_*``: fractions of the rows present that are measured, filled A, B
      or C, or unfilled; they sum to 1 (NaN for a period without rows).
    - ``nee_share_from_filled``: ``Σ|NEE| over filled rows / Σ|NEE| over all rows``
      with finite NEE. Absolute values, because the net sum can be near zero
      while much of the gross exchange is filled. NaN when the denominator is 0.

    Caution: a tower budget is one input to carbon-credit quantification, not a
    certified credit; defer to the applicable crediting methodology and
    accredited verification.
    """
    if not isinstance(timeseries.index, pd.DatetimeIndex):
        raise FluxpartError("timeseries: expected a DatetimeIndex of interval starts, found "
                            f"{type(timeseries.index).__name__}")
    seconds = _interval_seconds(interval_minutes)
    _check_spacing(timeseries.index, seconds)
    mapping = _flux_mapping(timeseries.columns, fluxes)
    absent = [name for name in list(mapping) + [quality_column]
              if name not in timeseries.columns]
    if absent:
        raise MissingColumnError(f"budget: column(s) {', '.join(repr(a) for a in absent)} "
                                 f"not in the timeseries; present: "
                                 f"{', '.join(map(str, timeseries.columns))}")
    if len(timeseries) == 0:
        raise InsufficientDataError("budget: the timeseries has no rows")
    quality = _quality_codes(timeseries[quality_column], quality_column)
    nee_in = next((k for k, v in mapping.items() if v == _NEE_OUTPUT), _NEE_INPUT)

    index = timeseries.index
    carbon = pd.DataFrame(
        {out: flux_to_carbon(_float_column(timeseries[col], col), interval_minutes)
         for col, out in mapping.items()}, index=index)
    per_record = _coverage_records(carbon, quality, nee_in, mapping)
    nee_out = mapping.get(nee_in)
    per_day = _MINUTES_PER_DAY // int(interval_minutes)

    daily_keys = index.normalize()
    daily = _summarise(carbon, per_record, daily_keys,
                       pd.date_range(daily_keys.min(), daily_keys.max(), freq="D"),
                       lambda periods: np.full(len(periods), per_day, dtype="int64"), nee_out)
    daily.index.name = "date"

    month_keys = index.to_period("M").to_timestamp()
    monthly = _summarise(carbon, per_record, month_keys,
                         pd.date_range(month_keys.min(), month_keys.max(), freq="MS"),
                         lambda periods: periods.days_in_month.to_numpy().astype("int64")
                         * per_day, nee_out)
    monthly.index.name = "month"

    year_keys = pd.Index(budget_year_numbers(index, year_start))
    years = pd.Index(np.arange(year_keys.min(), year_keys.max() + 1, dtype="int64"))
    bounds = _year_bounds(years, year_start)
    annual = _summarise(carbon, per_record, year_keys, years,
                        lambda periods: (bounds["period_end"] - bounds["period_start"])
                        .dt.days.to_numpy() * per_day, nee_out)
    annual.insert(0, "period_end", bounds["period_end"].to_numpy())
    annual.insert(0, "period_start", bounds["period_start"].to_numpy())
    annual.index.name = "year"

    units = {name: "g C m-2" for name in mapping.values()}
    units.update(COVERAGE_UNITS)
    units.update(period_start="", period_end="")  # dates
    return Budgets(daily=daily, monthly=monthly, annual=annual, units=units)


# --------------------------------------------------------------------------- #
# Helpers
# --------------------------------------------------------------------------- #
def _check_spacing(index: pd.DatetimeIndex, seconds: float) -> None:
    if len(index) == 0:
        return
    if index.hasnans:
        raise SpacingError("timeseries index: contains missing timestamps (NaT)")
    steps = np.asarray(np.diff(index.to_numpy().astype("datetime64[s]")).astype("int64"),
                       dtype=float)
    bad = np.flatnonzero((steps <= 0) | (np.mod(steps, seconds) != 0))
    if bad.size:
        row = int(bad[0]) + 1
        raise SpacingError(f"timeseries index: row {row} ({index[row]}) is {steps[bad[0]]:g} s "
                           f"after the previous row; expected increasing stamps a multiple of "
                           f"{seconds / 60:g} min apart")


def _flux_mapping(columns, fluxes) -> dict[str, str]:
    if fluxes is None:
        return default_flux_names(columns)
    if isinstance(fluxes, Mapping):
        mapping = {str(k): str(v) for k, v in fluxes.items()}
    elif isinstance(fluxes, str):
        raise FluxpartError(f"fluxes = {fluxes!r}: expected a mapping or a sequence of column "
                            "names, not a single string")
    else:
        mapping = {str(k): (_NEE_OUTPUT if k == _NEE_INPUT else str(k)) for k in fluxes}
    clash = set(mapping.values()) & set(COVERAGE_UNITS)
    if clash:
        raise FluxpartError(f"fluxes: output name(s) {sorted(clash)} clash with coverage "
                            "columns; choose other names")
    if len(set(mapping.values())) != len(mapping):
        raise FluxpartError(f"fluxes: two inputs map to the same output name in {mapping}")
    return mapping


def _float_column(series: pd.Series, name: str) -> pd.Series:
    try:
        return pd.Series(series.to_numpy(dtype=float, na_value=np.nan), index=series.index)
    except (TypeError, ValueError):
        raise FluxpartError(f"budget: column {name!r} is not numeric (dtype {series.dtype})") \
            from None


def _quality_codes(series: pd.Series, name: str) -> np.ndarray:
    try:
        values = series.to_numpy(dtype=float, na_value=np.nan)
    except (TypeError, ValueError):
        raise ImplausibleValueError(f"budget: column {name!r} is not numeric "
                                    f"(dtype {series.dtype})") from None
    bad = np.flatnonzero(~np.isin(values, list(_QUALITY_CODES)))
    if bad.size:
        row = int(bad[0])
        raise ImplausibleValueError(
            f"budget: column {name!r} has {bad.size} value(s) that are not a fill-quality "
            f"code (-1 unfilled, 0 measured, 1/2/3 filled A/B/C); first at row {row} "
            f"({series.index[row]}): {values[row]!r}")
    return values.astype("int64")


def _coverage_records(carbon, quality, nee_column, mapping) -> pd.DataFrame:
    """Per-record indicators whose period sums give the coverage columns."""
    nee = carbon[mapping[nee_column]].to_numpy()
    unfilled = (quality == -1) | ~np.isfinite(nee)
    out = {"records": np.ones(len(quality)), "records_unfilled": unfilled.astype(float)}
    for code, column in _QUALITY_CODES.items():
        out[column] = unfilled if code == -1 else (quality == code) & ~unfilled
    finite = np.isfinite(nee)
    magnitude = np.where(finite, np.abs(nee), 0.0)
    out["_abs_nee"] = magnitude
    out["_abs_nee_filled"] = np.where((quality >= 1) & finite, magnitude, 0.0)
    return pd.DataFrame({k: np.asarray(v, dtype=float) for k, v in out.items()},
                        index=carbon.index)


def _summarise(carbon, per_record, keys, periods, expected_for, nee_column) -> pd.DataFrame:
    missing = carbon.isna()
    if nee_column is not None:
        missing[nee_column] = per_record["records_unfilled"].to_numpy() > 0
    sums = carbon.fillna(0.0).groupby(keys).sum()
    sums = sums.mask(missing.groupby(keys).any()).reindex(periods)
    counts = per_record.groupby(keys).sum().reindex(periods, fill_value=0.0)
    frame = {column: sums[column].to_numpy() for column in sums.columns}  # one table at the end
    records = counts["records"].to_numpy().astype("int64")
    unfilled = counts["records_unfilled"].to_numpy().astype("int64")
    expected = np.asarray(expected_for(periods), dtype="int64")
    frame["records"] = records
    frame["records_expected"] = expected
    frame["records_unfilled"] = unfilled
    frame["complete"] = (records == expected) & (unfilled == 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        present = np.where(records > 0, records, np.nan)
        for column in ("share_measured", "share_filled_a", "share_filled_b",
                       "share_filled_c", "share_unfilled"):
            frame[column] = counts[column].to_numpy() / present
        total = counts["_abs_nee"].to_numpy()
        frame["nee_share_from_filled"] = np.where(
            total > 0, counts["_abs_nee_filled"].to_numpy() / np.where(total > 0, total, 1.0),
            np.nan)
    return pd.DataFrame(frame, index=sums.index)


def _year_bounds(years: pd.Index, year_start: str) -> pd.DataFrame:
    """First day of each budget year and of the next (``period_start``, ``period_end``)."""
    month, day = (int(part) for part in year_start.split("-"))
    return pd.DataFrame({
        "period_start": pd.to_datetime({"year": years.to_numpy(), "month": month, "day": day}),
        "period_end": pd.to_datetime({"year": years.to_numpy() + 1, "month": month,
                                      "day": day})})

