"""The parts of each annual flux's uncertainty as its total combines them, for display.

The annual table writes every part of the stated uncertainty as its own column
(:func:`fluxpart.uncertainty.period_uncertainty`), but not every flux takes every part,
nor the same column of a part: nighttime GPP (Reco − NEE) takes NEE's random and
gap-filling errors only outside the night (``gpp_nighttime_uncertainty_random``,
``..._gapfill``), and the daytime method, which keeps Lloyd–Taylor, its own
respiration-form part (and, with ``daytime_curvature = "average"``, its light-shape
part). :func:`uncertainty_parts` picks for each flux the columns its
``X_uncertainty_total`` combines, so that the parts shown add up (in quadrature) to the
total shown. Pure pandas: the report imports it without any method module.
"""

from __future__ import annotations

import pandas as pd

__all__ = ["FLUXES", "PART_LABELS", "uncertainty_parts"]

#: The annual fluxes with a stated uncertainty, in display order.
FLUXES = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")

#: Plain-language names of the parts (columns of :func:`uncertainty_parts`).
PART_LABELS = {
    "random": "random error",
    "gap filling": "gap filling",
    "ustar": "u* threshold",
    "parameters": "fitted parameters",
    "partitioning": "difference between the partitioning methods",
    "temperature": "choice of respiration temperature",
    "form": "respiration form (Lloyd–Taylor or Q10)",
    "light shape": "daytime light-response shape (rectangular or profiled curvature)",
}

#: Parts a run writes only with some settings: shown only where the table has them.
_OPTIONAL_PARTS = {"light shape": ("gpp_daytime_uncertainty_light_shape",
                                   "reco_daytime_uncertainty_light_shape")}


def _part_column(flux: str, part: str) -> str | None:
    """The annual column of `part` in `flux`'s total, or None where the total has no such
    part (:func:`fluxpart.uncertainty.period_uncertainty`, ``total(...)``)."""
    kind = flux.split("_")[0]
    if part in ("random", "gap filling"):
        if flux not in ("nee", "gpp_nighttime"):
            return None
        return f"{flux}_uncertainty_{'random' if part == 'random' else 'gapfill'}"
    if part == "ustar":
        return f"{flux}_uncertainty_ustar"
    if kind == "nee":
        return None
    if part == "parameters":
        return f"{flux}_uncertainty_parameters"
    if part == "partitioning":
        return f"{kind}_uncertainty_partitioning"
    if part == "temperature":
        return "reco_uncertainty_temperature_driver"
    if part == "form":
        return ("reco_daytime_uncertainty_respiration_form" if flux.endswith("daytime")
                else "reco_uncertainty_respiration_form")
    if part == "light shape":
        return f"{flux}_uncertainty_light_shape" if flux.endswith("daytime") else None
    raise ValueError(f"unknown uncertainty part {part!r}")


def uncertainty_parts(annual: pd.DataFrame) -> pd.DataFrame | None:
    """Each annual flux's uncertainty parts, total and stated 95 % interval.

    Parameters
    ----------
    annual : pandas.DataFrame
        The annual table (one row per budget year, indexed by year) as written.

    Returns
    -------
    pandas.DataFrame or None
        Indexed by (``year``, ``flux``); columns the parts of :data:`PART_LABELS`
        (the light shape's only where the table has its columns) [g C m-2, 1 sigma; NaN where the flux's total takes no such part or the run
        could not estimate it], ``total`` (``X_uncertainty_total``, the root sum of
        squares of the parts) and ``ci95_low`` / ``ci95_high`` [g C m-2]. None where
        the table has no ``X_uncertainty_total`` column.

    References
    ----------
    JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
    uncertainty in measurement (GUM), §5.1: independent standard uncertainties combine
    as the root sum of their squares (m).
    """
    nan = float("nan")
    shown = [part for part in PART_LABELS if part not in _OPTIONAL_PARTS
             or any(column in annual.columns for column in _OPTIONAL_PARTS[part])]
    rows = []
    for year, row in annual.iterrows():
        for flux in FLUXES:
            total = f"{flux}_uncertainty_total"
            if total not in annual.columns:
                continue
            entry = {"year": year, "flux": flux}
            for part in shown:
                column = _part_column(flux, part)
                entry[part] = float(row.get(column, nan)) if column else nan
            entry.update(total=float(row[total]),
                         ci95_low=float(row.get(f"{flux}_ci95_low", nan)),
                         ci95_high=float(row.get(f"{flux}_ci95_high", nan)))
            rows.append(entry)
    if not rows:
        return None
    return pd.DataFrame(rows).set_index(["year", "flux"])
