"""The audit trail: what happened to every NEE record of a year, stage by stage.

For each calendar year :func:`audit_trail` counts the records present, how many
the screening kept and how many each reason rejected (in the order of
:data:`fluxpart.screening.REASON_CODES`: missing, out of range, site flag,
spike, low u*, morning after a calm night), how the NEE that went into the budget came about (measured, or
filled with quality A, B or C, or left unfilled), and how much of the gross
exchange Σ|NEE| came from measured and from filled records. It becomes the
``audit`` table of a result folder, beside the manifest that records the input,
settings and versions, so an auditor can see where every number came from.

Caution: a tower budget is one line of evidence for carbon-credit
quantification, not a certified credit; defer to the applicable crediting
methodology and accredited verification.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import FluxpartError, ImplausibleValueError, MissingColumnError
from .schema import AUDIT_COLUMNS
from .screening import REASON_CODES
from .units import GRAMS_CARBON_PER_UMOL

__all__ = ["AUDIT_COLUMNS", "QUALITY_NAMES", "audit_trail"]

#: Fill-quality code of ``nee_fill_quality`` -> audit column.
QUALITY_NAMES: dict[int, str] = {0: "nee_measured", 1: "nee_filled_a", 2: "nee_filled_b",
                                 3: "nee_filled_c", -1: "nee_unfilled"}
#: Fill-quality code -> the label of the string-coded ``nee_fill_quality`` column.
_QUALITY_LABELS: dict[int, str] = {0: "measured", 1: "A", 2: "B", 3: "C", -1: "unfilled"}

def _reason_column(code: int, name: str) -> str:
    return "screening_kept" if code == 0 else f"rejected_{name}"


def _interval_seconds(index: pd.DatetimeIndex) -> float:
    steps = np.diff(index.to_numpy().astype("datetime64[s]").astype(np.int64))
    if steps.size == 0 or (steps <= 0).any():
        raise FluxpartError("audit: the time axis must have at least two increasing stamps")
    return float(steps.min())


def _codes(timeseries: pd.DataFrame, column: str, valid, labels) -> np.ndarray:
    """Integer codes of `column`, given as codes or as their labels (code -> label)."""
    series = timeseries[column]
    if not (pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series)):
        code_of = {label: code for code, label in labels.items()}
        series = series.astype(object).map(lambda label: code_of.get(label, label))
        series = pd.to_numeric(series, errors="coerce")
    values = series.to_numpy(dtype=float, na_value=np.nan)
    bad = np.flatnonzero(~np.isin(values, list(valid)))
    if bad.size:
        row = int(bad[0])
        raise ImplausibleValueError(
            f"audit: column {column!r} has {bad.size} value(s) that are not valid codes "
            f"({sorted(valid)}); first at row {row} ({timeseries.index[row]}): {values[row]!r}")
    return values.astype(np.int64)


def audit_trail(timeseries: pd.DataFrame, *, year_keys=None) -> pd.DataFrame:
    """Count, per calendar or budget year, the records at each stage of processing.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The pipeline's timeseries on a DatetimeIndex of interval starts (local
        standard time): ``rejection_reason`` (the int codes of
        :data:`fluxpart.screening.REASON_CODES` or their names), ``nee_fill_quality``
        (0 measured, 1/2/3 filled A/B/C, -1 unfilled, or the labels ``"measured"``,
        ``"A"``, ``"B"``, ``"C"``, ``"unfilled"``) and ``nee_filled`` [µmol m-2 s-1].
    year_keys : array_like of int, optional
        Budget year of each record (``year`` of
        :func:`fluxpart.budget_calendar.budget_years`); default the calendar year.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``year`` (int): ``records_present``, ``screening_kept``,
        ``rejected_<reason>`` for every other reason, ``nee_measured``,
        ``nee_filled_a``, ``nee_filled_b``, ``nee_filled_c``, ``nee_unfilled``
        (record counts), ``abs_nee_measured`` and ``abs_nee_filled`` [g C m-2] and
        their shares ``abs_nee_share_measured``, ``abs_nee_share_filled`` [1]. Units
        and descriptions: :data:`AUDIT_COLUMNS`.

    Raises
    ------
    MissingColumnError
        If a column is absent.
    ImplausibleValueError
        If a reason or quality code is unknown (the row is named).
    FluxpartError
        If the index is not an increasing DatetimeIndex.

    Notes
    -----
    Per year, ``screening_kept`` plus all ``rejected_*`` equals
    ``records_present``, and so do the five ``nee_*`` counts. A record kept by
    the screening is one whose NEE was measured, so ``screening_kept`` equals
    ``nee_measured``. The |NEE| shares use absolute values because the net sum
    can be near zero while much of the gross exchange is filled; they are NaN
    for a year without finite NEE. Only rows present are counted; the budget's
    ``records_expected`` tells how many the calendar year has.
    """
    if not isinstance(timeseries.index, pd.DatetimeIndex):
        raise FluxpartError("audit: the timeseries needs a DatetimeIndex of interval starts, "
                            f"found {type(timeseries.index).__name__}")
    absent = [c for c in ("rejection_reason", "nee_fill_quality", "nee_filled")
              if c not in timeseries.columns]
    if absent:
        raise MissingColumnError(f"audit: timeseries lacks column(s) "
                                 f"{', '.join(map(repr, absent))}")
    seconds = _interval_seconds(timeseries.index)
    reason = _codes(timeseries, "rejection_reason", REASON_CODES, REASON_CODES)
    quality = _codes(timeseries, "nee_fill_quality", QUALITY_NAMES, _QUALITY_LABELS)
    nee = timeseries["nee_filled"].to_numpy(dtype=float, na_value=np.nan)
    carbon = np.where(np.isfinite(nee), np.abs(nee), 0.0) * seconds * GRAMS_CARBON_PER_UMOL

    years = (timeseries.index.year.to_numpy() if year_keys is None
             else np.asarray(year_keys)).astype(np.int64)
    if years.size != len(timeseries):
        raise FluxpartError(f"audit: {years.size} year keys for {len(timeseries)} records")
    columns = {"records_present": np.ones(len(years))}
    for code, name in REASON_CODES.items():
        columns[_reason_column(code, name)] = reason == code
    for code, name in QUALITY_NAMES.items():
        columns[name] = quality == code
    counts = pd.DataFrame({k: np.asarray(v, dtype=np.int64) for k, v in columns.items()})
    counts = counts.groupby(years).sum().astype(np.int64)
    sums = pd.DataFrame({"abs_nee_measured": np.where(quality == 0, carbon, 0.0),
                         "abs_nee_filled": np.where(quality >= 1, carbon, 0.0)})
    sums = sums.groupby(years).sum()
    out = counts.join(sums)
    total = out["abs_nee_measured"] + out["abs_nee_filled"]
    positive = total.where(total > 0)
    out["abs_nee_share_measured"] = out["abs_nee_measured"] / positive
    out["abs_nee_share_filled"] = out["abs_nee_filled"] / positive
    out.index = pd.Index(out.index.to_numpy(dtype=np.int64), name="year")
    return out
