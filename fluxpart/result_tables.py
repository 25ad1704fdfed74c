"""The result's tables built from the stage outputs: time series, budgets, counts.

The per-record time series (the input, solar geometry, screening flags and reasons, the
u* filter, the drivers' and NEE's fills, both partitionings), the daily, monthly and
annual budgets with the methods' agreement and the u* runs' spread, the screening
counts, and the :class:`~fluxpart.result.Result` with each table's metadata
(:mod:`fluxpart.schema`). Labels only: nothing here computes science.
"""

from __future__ import annotations

import pandas as pd

from . import gapfill, schema, screening

#: Budget column of each summed time-series column.
BUDGET_FLUXES = {"nee_filled": "nee", "gpp_nighttime": "gpp_nighttime",
                  "reco_nighttime": "reco_nighttime", "gpp_daytime": "gpp_daytime",
                  "reco_daytime": "reco_daytime"}
#: Rejection-reason codes decided after the u* threshold.
REASON_LOW_USTAR = {name: code for code, name in screening.REASON_CODES.items()}["low_ustar"]
REASON_MORNING_RELEASE = {name: code for code, name
                           in screening.REASON_CODES.items()}["morning_release"]
#: Labels of the fill-quality codes of gap filling (its own mapping where it has one).
_QUALITY_LABELS = getattr(gapfill, "QUALITY_NAMES", None) or {
    gapfill.QUALITY_UNFILLED: "unfilled", gapfill.QUALITY_MEASURED: "measured",
    gapfill.QUALITY_A: "A", gapfill.QUALITY_B: "B", gapfill.QUALITY_C: "C"}
#: Labels of the fill-method codes of gap filling.
_METHOD_LABELS = {gapfill.METHOD_UNFILLED: "unfilled", gapfill.METHOD_MEASURED: "measured",
                  gapfill.METHOD_ALL_DRIVERS: "similar_drivers",
                  gapfill.METHOD_RADIATION: "similar_radiation",
                  gapfill.METHOD_DIURNAL_COURSE: "diurnal_course",
                  getattr(gapfill, "METHOD_INTERPOLATED", 4): "interpolated"}


def labelled(timeseries: pd.DataFrame) -> pd.DataFrame:
    """Rejection reason, fill method and fill qualities as labelled (dictionary) columns."""
    labels = {"rejection_reason": screening.REASON_CODES, "nee_fill_method": _METHOD_LABELS}
    labels.update({c: _QUALITY_LABELS for c in timeseries.columns if c.endswith("_fill_quality")})
    return timeseries.assign(**{column: schema.as_labels(timeseries[column].to_numpy(), names)
                                for column, names in labels.items()
                                if column in timeseries.columns})
