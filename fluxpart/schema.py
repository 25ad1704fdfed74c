"""Units and descriptions of every output column, stored in the Parquet field metadata.

:func:`describe` returns ``(unit, description)`` for a column of a named table.
Exact names come first, then patterns for families of columns (fill columns of
each driver, u* scenario sums, coverage shares). A column no rule knows gets an
empty unit; the test suite checks that every column of a real run is described.
"""

from __future__ import annotations

import re

from .audit import AUDIT_COLUMNS
from .uncertainty import ANNUAL_COLUMNS, MODEL_COLUMNS
from .variables import VARIABLES

__all__ = ["describe", "units_for_table"]

FLUX = "µmol m-2 s-1"
_NAMES = {"gpp": "GPP", "reco": "Reco"}
CARBON = "g C m-2"

_TIMESERIES = {
    "time": ("", "start of the averaging interval, local standard time"),
    "sun_elevation": ("degrees", "solar elevation at the middle of the interval"),
    "potential_radiation": ("W m-2", "top-of-atmosphere irradiance on a horizontal surface, "
                            "interval mean"),
    "is_night": ("1", "night record: rg below night_rg_threshold (potential radiation 0 where "
                 "rg is missing)"),
    "rejection_reason": ("1", "first reason NEE was rejected: 0 kept, 1 missing, 2 out of range, "
                         "3 site flag, 4 spike, 5 low u*"),
    "ustar_threshold": ("m s-1", "u* threshold applied to this record (its year's central value)"),
    "nee_measured": (FLUX, "NEE after screening and the u* filter: the values gap filling and "
                     "partitioning may use"),
    "nee_filled": (FLUX, "gap-filled NEE (measured where available); positive = release"),
    "nee_fill_method": ("1", "fill step: 0 measured, 1 similar Rg+Tair+VPD, 2 similar Rg, "
                        "3 mean diurnal course, -1 not fillable"),
    "nee_fill_window_days": ("days", "full width of the time window the fill came from"),
    "nee_fill_count": ("1", "number of records averaged into the fill"),
    "nee_fill_std": (FLUX, "standard deviation of the records averaged into the fill"),
    "nee_fill_quality": ("1", "fill quality: 0 measured, 1 A, 2 B, 3 C, -1 unfilled"),
    "gpp_nighttime": (FLUX, "gross primary production, nighttime method (Reco - NEE)"),
    "reco_nighttime": (FLUX, "ecosystem respiration, nighttime method (Lloyd–Taylor)"),
    "rref_nighttime": (FLUX, "Lloyd–Taylor reference respiration at 10 °C, nighttime method"),
    "e0_nighttime": ("K", "Lloyd–Taylor temperature sensitivity E0 applied (its year's value)"),
    "gpp_daytime": (FLUX, "gross primary production, daytime light-response method"),
    "reco_daytime": (FLUX, "ecosystem respiration, daytime light-response method"),
    "nee_random_error": (FLUX, "random error (standard deviation) of the record's NEE"),
}

_BUDGET = {
    "date": ("", "calendar day (local standard time)"),
    "month": ("", "first day of the calendar month"),
    "year": ("", "calendar year of the interval starts"),
    "nee": (CARBON, "net ecosystem exchange summed over the period; < 0 is net uptake"),
    "records": ("1", "records present in the period"),
    "records_expected": ("1", "records the full period has at this interval"),
    "records_unfilled": ("1", "records whose NEE could not be filled"),
    "complete": ("1", "every record of the period present and NEE filled"),
    "share_measured": ("1", "share of records with measured NEE"),
    "share_filled_a": ("1", "share of records filled with quality A"),
    "share_filled_b": ("1", "share of records filled with quality B"),
    "share_filled_c": ("1", "share of records filled with quality C"),
    "share_unfilled": ("1", "share of records left unfilled"),
    "nee_share_from_filled": ("1", "share of the sum of |NEE| that came from filled records"),
    "ustar_threshold": ("m s-1", "u* threshold applied in the year"),
}

_PATTERNS = [
    (r"(rg|tair|vpd|tsoil)_filled", lambda m: (VARIABLES[m[1]].unit,
                                               f"gap-filled {VARIABLES[m[1]].description}")),
    (r"(rg|tair|vpd|tsoil)_fill_quality", lambda m: ("1", f"fill quality of {m[1]}: 0 measured, "
                                                     "1 A, 2 B, 3 C, -1 unfilled")),
    (r"(\w+)_out_of_range", lambda m: ("1", f"{m[1]} outside its plausible range")),
    (r"nee_site_flag", lambda m: ("1", "rejected by the site's own flag")),
    (r"nee_spike", lambda m: ("1", "rejected as a spike (Papale et al. 2006)")),
    (r"nee_low_ustar", lambda m: ("1", "night record with u* below the threshold")),
    (r"rg_above_potential", lambda m: ("1", "Rg above potential radiation by more than the "
                                       "margin")),
]

_BUDGET_PATTERNS = [
    (r"(nee|gpp_nighttime|reco_nighttime|gpp_daytime|reco_daytime)_ustar_(p[\d.]+)",
     lambda m: (CARBON, f"{m[1]} summed with the u* threshold at bootstrap percentile "
                f"{m[2][1:]}")),
    (r"(nee|gpp_nighttime|reco_nighttime|gpp_daytime|reco_daytime)_ustar_spread",
     lambda m: (CARBON, f"{m[1]}: max - min over the u* threshold scenarios")),
    (r"(gpp|reco)_(nighttime|daytime)", lambda m: (CARBON, f"{_NAMES[m[1]]} summed over the "
                                                   f"period, {m[2]} method")),
    (r"(gpp|reco)_method_difference", lambda m: (CARBON, f"{_NAMES[m[1]]} daytime minus "
                                                 "nighttime")),
    (r"(gpp|reco)_relative_difference", lambda m: ("1", f"{_NAMES[m[1]]} (daytime - nighttime) "
                                                   "/ mean of both")),
    (r"methods_agree", lambda m: ("1", "daytime and nighttime GPP and Reco within the "
                                  "agreement margin")),
]


def describe(table: str, column: str) -> tuple[str, str]:
    """Return ``(unit, description)`` of `column` in output table `table`.

    Parameters
    ----------
    table : str
        ``"timeseries"``, ``"daily"``, ``"monthly"``, ``"annual"`` or a parameter table.
    column : str
        Column name.

    Returns
    -------
    tuple of str
        Unit (``"1"`` for counts, flags and shares; ``""`` where none applies or the
        column is unknown) and a one-line description.
    """
    if table == "timeseries":
        if column in VARIABLES:
            variable = VARIABLES[column]
            return variable.unit, f"input: {variable.description}"
        exact, patterns = _TIMESERIES, _PATTERNS
    elif table in ("daily", "monthly", "annual"):
        exact, patterns = {**_BUDGET, **ANNUAL_COLUMNS}, _BUDGET_PATTERNS
    elif table == "audit":
        exact, patterns = {"year": _BUDGET["year"], **AUDIT_COLUMNS}, []
    else:
        return {**MODEL_COLUMNS, **_PARAMETER_UNITS}.get(column, ("", ""))
    if column in exact:
        return exact[column]
    for pattern, rule in patterns:
        match = re.fullmatch(pattern, column)
        if match:
            return rule(match)
    return "", ""


def units_for_table(table: str, columns) -> dict[str, tuple[str, str]]:
    """Return column -> (unit, description) for every column of a table."""
    return {column: describe(table, column) for column in columns}


_PARAMETER_UNITS = {
    "window_start": ("", "first instant of the window"),
    "window_end": ("", "end of the window (exclusive)"),
    "window_centre": ("", "centre of the window; parameters are assigned here"),
    "year": ("", "calendar year"),
    "season": ("", "season name"),
    "points": ("1", "records used in the fit"),
    "temperature_range": ("K", "range of temperature in the window"),
    "e0": ("K", "Lloyd–Taylor temperature sensitivity"),
    "e0_se": ("K", "standard error of E0"),
    "rref": (FLUX, "reference respiration at 10 °C"),
    "rref_se": (FLUX, "standard error of Rref"),
    "alpha": ("µmol J-1", "initial slope of the light response (canopy light-use efficiency)"),
    "alpha_se": ("µmol J-1", "standard error of alpha"),
    "beta0": (FLUX, "maximum assimilation at light saturation below the VPD limit"),
    "beta0_se": (FLUX, "standard error of beta0"),
    "k": ("hPa-1", "VPD limitation coefficient"),
    "k_se": ("hPa-1", "standard error of k"),
    "rmse": (FLUX, "root-mean-square residual of the fit"),
    "accepted": ("1", "fit accepted"),
    "reason": ("", "why a fit was rejected or replaced, or a note on an accepted one"),
    "status": ("", "daytime window: accepted (own fit), replaced (refit with Rref fixed at the "
               "night Rref) or rejected (parameters interpolated from neighbouring windows)"),
    "e0_points": ("1", "night records of the E0 fit (0 where E0 was interpolated)"),
    "e0_window_days": ("d", "width of the night window centred on the daytime window that "
                       "gave E0 (empty where interpolated)"),
    "e0_source": ("", "E0 from the window's own night data (window), a wider night window "
                  "(widened), interpolated between windows, or supplied"),
    "rref_night": (FLUX, "Rref of the window's night NEE with its E0, least squares (CO2)"),
    "rref_night_se": (FLUX, "standard error of the night Rref (CO2)"),
    "weighted": ("1", "fit weighted by the random error of NEE"),
    "k_fixed": ("1", "k fixed at 0 (not identifiable)"),
    "threshold": ("m s-1", "u* threshold"),
    "row": ("1", "row number"),
    "period": ("", "\"year\" or the season name"),
    "months": ("", "months of the season, e.g. DJF"),
    "detector": ("", "u* threshold detector: moving_point, change_point or fixed"),
    "night_records": ("1", "usable night records"),
    "night_points": ("1", "measured night records in the window (start and night Rref)"),
    "threshold_detected": ("m s-1", "u* threshold found before the floor was applied"),
    "threshold_p05": ("m s-1", "5th percentile of the bootstrap thresholds"),
    "threshold_p16": ("m s-1", "16th percentile of the bootstrap thresholds"),
    "threshold_p50": ("m s-1", "median of the bootstrap thresholds"),
    "threshold_p84": ("m s-1", "84th percentile of the bootstrap thresholds"),
    "threshold_p95": ("m s-1", "95th percentile of the bootstrap thresholds"),
    "draws_valid": ("1", "bootstrap draws that gave a threshold"),
    "draw": ("1", "bootstrap draw number"),
    "windows_accepted": ("1", "E0 windows that passed every acceptance rule"),
    "windows_used": ("1", "accepted E0 windows averaged into the year's E0"),
    "windows_tried": ("1", "E0 windows fitted in the year"),
    "source": ("", "where the value came from"),
}
