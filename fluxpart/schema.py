"""The column catalogue: unit and description of every output column.

:func:`describe` returns ``(unit, description)`` for a column of a named table.
Exact names come first, then patterns for families of columns (fill columns of
each driver, u* scenario sums, coverage shares, stated intervals). A column no
rule knows gets ``("", "")``; the test suite checks that every column of a real
run is described.

Units are UDUNITS-2 strings (:mod:`fluxpart.units`): ``umol m-2 s-1`` for fluxes of
CO2, ``g m-2`` for sums of carbon, ``t ha-1`` for tonnes of CO2; the substance
(carbon, CO2) is named in the description, because UDUNITS-2 would read
``g C m-2`` as gram·coulomb per square metre. ``"1"`` marks counts, flags and
shares; ``""`` columns with no unit (names, labels, timestamps).

This module is self-contained: stage modules may import their column
descriptions from here (:data:`AUDIT_COLUMNS`, :data:`UNCERTAINTY_COLUMNS`,
:data:`RANDOM_ERROR_MODEL_COLUMNS`), never the other way round.

:func:`file_metadata` builds the file-level key-value metadata (key ``fluxpart``)
that every Parquet table carries: the site, the record length, the time
convention and each column's unit and description.
"""

from __future__ import annotations

import re
from typing import NamedTuple

import numpy as np
import pandas as pd

from .units import METADATA_CARBON_UNIT as CARBON
from .units import METADATA_FLUX_UNIT as FLUX
from .units import METADATA_TONNES_PER_HECTARE, udunits
from .variables import VARIABLES

__all__ = [
    "AUDIT_COLUMNS",
    "FILL_METHOD_LABELS",
    "NOT_QUANTIFIED",
    "RANDOM_ERROR_MODEL_COLUMNS",
    "REASON_LABELS",
    "REWORDED_DESCRIPTIONS",
    "RewordedDescription",
    "TIME_CONVENTION",
    "QUALITY_LABELS",
    "NOT_QUANTIFIED",
    "UNCERTAINTY_COLUMNS",
    "as_codes",
    "as_labels",
    "describe",
    "file_metadata",
    "reworded",
    "time_convention",
    "units_for_table",
    "with_metadata",
]

#: How every time stamp of every table is meant, with budget years of calendar years
#: (``year_start = "01-01"``; :func:`time_convention` for any other).
TIME_CONVENTION = ("each stamp marks the start of its averaging interval, in local standard "
                   "time (UTC + site utc_offset, no daylight saving); a day, month or year is "
                   "the set of intervals that start in it")
#: The default first day of a budget year ([processing] year_start, "MM-DD").
CALENDAR_YEAR_START = "01-01"


def _budget_year_text(year_start: str | None) -> str:
    """What a budget year's label means under `year_start` ("MM-DD"; None: each site's own)."""
    if year_start is None:
        return ("a budget year holds the intervals that start from its site's [processing] "
                "year_start to before the next one, labelled by the calendar year in which "
                "it starts")
    return (f"budget year Y ([processing] year_start = {year_start}) holds the intervals "
            f"that start from Y-{year_start} to before (Y+1)-{year_start}, labelled by the "
            "calendar year in which it starts")


def time_convention(year_start: str | None = CALENDAR_YEAR_START) -> str:
    """How every time stamp of a table is meant, and which records a period holds.

    Parameters
    ----------
    year_start : str or None
        First day of the budget year, "MM-DD" ([processing] year_start); None for a
        table of several sites, each with its own.

    Returns
    -------
    str
        :data:`TIME_CONVENTION` for calendar budget years; otherwise days and months as
        the intervals that start in them and the budget year spelt out (under
        ``"10-01"`` budget year 2018 holds no record of 2018 before October, and one
        of 2019 up to September: "the intervals that start in it" was wrong for it).
    """
    if year_start == CALENDAR_YEAR_START:
        return TIME_CONVENTION
    return ("each stamp marks the start of its averaging interval, in local standard time "
            "(UTC + site utc_offset, no daylight saving); a day or month is the set of "
            f"intervals that start in it; {_budget_year_text(year_start)}")

_NAMES = {"gpp": "GPP", "reco": "Reco", "nee": "NEE"}
_FLUXES = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")

#: Label of every screening outcome, in the order the checks are applied (the
#: values of ``rejection_reason``); the first is "kept".
REASON_LABELS = ("kept", "missing", "out_of_range", "site_flag", "spike", "low_ustar",
                 "morning_release")
#: Label of every fill-quality code (the values of the ``*_fill_quality`` columns); the
#: same as :data:`fluxpart.gapfill.QUALITY_NAMES` (tested).
QUALITY_LABELS: dict[int, str] = {-1: "unfilled", 0: "measured", 1: "A", 2: "B", 3: "C",
                                  4: "interpolated"}
#: Label of every fill step (the values of ``nee_fill_method``).
FILL_METHOD_LABELS = ("measured", "similar_drivers", "similar_radiation", "diurnal_course",
                      "interpolated", "unfilled")

_REASONS_TEXT = ("kept (passed screening and the u* filter), missing, out_of_range, site_flag, "
                 "spike (Papale et al. 2006), low_ustar (night record below the u* threshold), "
                 "morning_release (day record within 3 h after a calm night, in a year "
                 "whose mornings after calm nights show the release of stored CO2)")
_QUALITY_TEXT = ("measured; A, B, C: filled, from the best to the least reliable class of "
                 "marginal distribution sampling; interpolated: a short driver gap filled "
                 "linearly; unfilled")
_CARBON_SUM = "grams of carbon per square metre"

_GPP_NIGHTTIME = (
    "gross primary production by the nighttime method, Reco_nighttime - NEE, CO2; positive = "
    "uptake by photosynthesis. At night and in dormant periods it is the scatter of NEE around "
    "modelled Reco and is often negative: keep the negative values when summing (clipping them "
    "biases sums upward)")
_GPP_DAYTIME = (
    "gross primary production by the daytime light-response method (Lasslop et al. 2010), CO2; "
    "positive = uptake; the light-response term, >= 0 by construction and 0 where rg_filled <= 0: "
    "a night record whose rg_filled is above 0 (a radiometer's offset, twilight) gets a small "
    "value")

_TIMESERIES = {
    "time": ("", "start of the averaging interval, local standard time"),
    "sun_elevation": ("degree", "solar elevation at the middle of the interval"),
    "potential_radiation": ("W m-2", "top-of-atmosphere irradiance on a horizontal surface, "
                            "interval mean"),
    "is_night": ("1", "night record: rg below night_rg_threshold (potential radiation 0 where "
                 "rg is missing)"),
    "rejection_reason": ("", f"screening outcome of the record's NEE: {_REASONS_TEXT}"),
    "ustar_threshold": ("m s-1", "u* threshold applied to this record: its calendar year's "
                        "central value, or its season's own where that year's seasons clearly "
                        "differ and the season's is higher (ustar_distinct_seasons = "
                        "own_threshold)"),
    "nee_measured": (FLUX, "NEE of CO2 after screening and the u* filter: the values gap filling "
                     "and partitioning may use; positive = release"),
    "nee_filled": (FLUX, "gap-filled net ecosystem exchange of CO2 (measured where available); "
                   "positive = release to the atmosphere, negative = uptake"),
    "nee_fill_method": ("", "fill step: measured, similar_drivers (Rg, Tair, VPD), "
                        "similar_radiation (Rg only), diurnal_course, unfilled"),
    "nee_fill_window_days": ("day", "full width of the time window the fill came from"),
    "nee_fill_count": ("1", "number of records averaged into the fill"),
    "nee_fill_std": (FLUX, "standard deviation of the records averaged into the fill (CO2)"),
    "nee_fill_quality": ("", f"fill quality of NEE: {_QUALITY_TEXT}"),
    "gpp_nighttime": (FLUX, _GPP_NIGHTTIME),
    "reco_nighttime": (FLUX, "ecosystem respiration by the nighttime method (Lloyd–Taylor), "
                       "CO2; positive = release, >= 0"),
    "rref_nighttime": (FLUX, "Lloyd–Taylor reference respiration at 10 °C, nighttime method "
                       "(CO2)"),
    "e0_nighttime": ("K", "Lloyd–Taylor temperature sensitivity E0 applied (its year's value)"),
    "gpp_daytime": (FLUX, _GPP_DAYTIME),
    "reco_daytime": (FLUX, "ecosystem respiration by the daytime light-response method, CO2; "
                     "positive = release, >= 0"),
    "nee_random_error": (FLUX, "random error of the record's NEE, one standard deviation (CO2); "
                         "also the random error of its nighttime GPP (GPP = Reco - NEE)"),
}

#: The annual table's ``year`` with calendar budget years (``year_start = "01-01"``);
#: :func:`describe` spells out any other year_start.
_ANNUAL_YEAR = "calendar year of the interval starts (the year the budget year starts in)"
#: The audit table's ``year`` with calendar budget years.
_AUDIT_YEAR = ("budget year of the interval starts: the calendar year in which it starts "
               "([processing] year_start)")

_BUDGET = {
    "date": ("", "calendar day (local standard time)"),
    "month": ("", "first day of the calendar month (local standard time)"),
    "year": ("", _ANNUAL_YEAR),
    "period_start": ("", "first day of the budget year, from [processing] year_start (local "
                     "standard time)"),
    "period_end": ("", "first day after the budget year (the next one's period_start; the "
                   "period ends just before it)"),
    "nee": (CARBON, f"net ecosystem exchange summed over the period, {_CARBON_SUM}; < 0 is net "
            "uptake"),
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
    "ustar_threshold": ("m s-1", "u* threshold applied in the year (the largest where a budget "
                        "year spans two calendar years' thresholds)"),
}

#: What the stated intervals do not contain (named in the column descriptions); the
#: uncertainty module states the same list in the manifest.
NOT_QUANTIFIED = (
    "systematic measurement errors: energy-balance non-closure, advection and storage not "
    "removed by the u* filter, footprint heterogeneity, gas-analyser calibration",
    "model-structure error shared by both partitioning methods (both rest on a Lloyd–Taylor "
    "temperature response)",
    "errors of the meteorological drivers and of their gap filling",
    "lateral carbon fluxes and harvest export (outside the tower's view)",
)
_NOT_COVERED = "not included: " + "; ".join(NOT_QUANTIFIED)
#: The parts each total adds in quadrature (fluxpart.uncertainty.period_uncertainty):
#: every partitioned flux's total also holds the choice of respiration temperature and of
#: respiration form (review54: the descriptions named neither, though both are added).
_STRUCTURE = ("partitioning, respiration temperature (reco_uncertainty_temperature_driver) "
              "and respiration form ({form})")
#: The daytime totals' part written with one setting only (review55: the descriptions of
#: the totals named every part but this one, which ``daytime_curvature = "average"`` adds).
_LIGHT_SHAPE = (", and with daytime_curvature = average the light-response shape "
                "({flux}_uncertainty_light_shape)")
_TOTAL_PARTS = {
    "nee": "random, gap filling and u* threshold",
    "gpp_nighttime": "random and gap filling of the records outside the night, u* threshold, "
                     "fitted parameters, "
                     + _STRUCTURE.format(form="reco_uncertainty_respiration_form"),
    "reco_nighttime": "u* threshold, fitted parameters (E0, Rref), "
                      + _STRUCTURE.format(form="reco_uncertainty_respiration_form"),
    "gpp_daytime": "u* threshold, fitted parameters (Rref of the windows), "
                   + _STRUCTURE.format(form="reco_daytime_uncertainty_respiration_form")
                   + _LIGHT_SHAPE.format(flux="gpp_daytime"),
    "reco_daytime": "u* threshold, fitted parameters (Rref of the windows), "
                    + _STRUCTURE.format(form="reco_daytime_uncertainty_respiration_form")
                    + _LIGHT_SHAPE.format(flux="reco_daytime"),
}
#: What each method's fitted-parameter part holds (fluxpart.uncertainty.period_uncertainty):
#: the daytime windows' Rref is fitted with the year's pooled E0 held fixed, and the error
#: of that E0 is not propagated (review54: the description claimed it was).
_PARAMETER_PARTS = {
    "gpp_nighttime": "the fitted E0 and window Rref, and Rref interpolated between window "
                     "centres, over the records outside the night",
    "reco_nighttime": "the fitted E0 and window Rref, and Rref interpolated between window "
                      "centres",
    "gpp_daytime": "the Rref of the light-response windows (fitted with the year's pooled E0 "
                   "held fixed; that E0's own error is not counted), Rref interpolated between "
                   "window centres, and across a stretch of more than 14 days without a "
                   "window the change of the light response at an unknown time",
    "reco_daytime": "the Rref of the light-response windows (fitted with the year's pooled E0 "
                    "held fixed; that E0's own error is not counted) and Rref interpolated "
                    "between window centres",
}

#: Unit and description of the uncertainty and carbon-accounting columns of the budget
#: tables (:mod:`fluxpart.uncertainty`). Every ``_uncertainty_`` and ``_sigma`` column is
#: one standard deviation, in grams of carbon per square metre.
UNCERTAINTY_COLUMNS: dict[str, tuple[str, str]] = {
    "nee_uncertainty_random": (CARBON, "1 sigma: random error of the NEE sum over the measured "
                               "records (Laplace record errors, Monte Carlo per year, analytic "
                               "per day and month), grams of carbon; filled records are in the "
                               "gap-filling part"),
    "nee_uncertainty_random_percentile_2_5": (CARBON, "2.5th percentile of the Monte Carlo "
                                              "random error of the annual NEE sum (measured "
                                              "records), grams of carbon"),
    "nee_uncertainty_random_percentile_97_5": (CARBON, "97.5th percentile of the Monte Carlo "
                                               "random error of the annual NEE sum (measured "
                                               "records), grams of carbon"),
    "nee_uncertainty_random_analytic": (CARBON, "1 sigma: random error of the annual NEE sum "
                                        "over the measured records from their variances "
                                        "(independent errors), grams of carbon"),
    "nee_uncertainty_gapfill": (CARBON, "1 sigma of the NEE sum (carbon) from gap filling, "
                                "scored on artificial gaps of the site's own gap lengths: "
                                "independent and within-gap correlated parts (Richardson & "
                                "Hollinger 2007; gaps longer than a day by 7-day blocks), the "
                                "covariance of fills at most 7 days apart and of each fill with "
                                "the measured records it averages, plus the systematic fill bias"),
    "nee_uncertainty_gapfill_bias": (CARBON, "systematic gap-filling bias of the NEE sum "
                                     "(carbon) on artificial gaps (fill minus measured; not "
                                     "subtracted from nee, counted in nee_uncertainty_gapfill)"),
    "nee_uncertainty_gapfill_bias_se": (CARBON, "standard error of nee_uncertainty_gapfill_bias "
                                        "(carbon) from the spread of the artificial gaps' "
                                        "errors, as if the period's filled records shared one "
                                        "error; reported, not counted in "
                                        "nee_uncertainty_gapfill (since 0.7.0)"),
    "gpp_nighttime_uncertainty_random": (CARBON, "1 sigma: random error of nighttime GPP "
                                         "(GPP = Reco - NEE): random error of the NEE sum over "
                                         "the measured records outside the night, grams of "
                                         "carbon (at night Reco is fitted to the same records, "
                                         "so their error cancels)"),
    "gpp_nighttime_uncertainty_gapfill": (CARBON, "1 sigma: gap-filling part of nighttime GPP "
                                          "(GPP = Reco - NEE): the NEE gap-filling error of "
                                          "the filled records outside the night, grams of "
                                          "carbon (night gaps are filled from the night "
                                          "records Reco is fitted to)"),
    "gpp_uncertainty_partitioning": (CARBON, "1 sigma: structural error of the "
                                     "partitioned fluxes (carbon): E = d^2 - p_day^2 - "
                                     "p_night^2 of d = daytime - nighttime of GPP and of "
                                     "Reco less the methods' own parts, s = sqrt(max(E_gpp "
                                     "+ E_reco, 0) / 4), one s for GPP and Reco (nighttime "
                                     "GPP = Reco - NEE); in the totals of both methods"),
    "reco_uncertainty_temperature_driver": (CARBON, "1 sigma: structural error of Reco and GPP "
                                            "(carbon) from the choice of respiration "
                                            "temperature: |nighttime Reco with the other "
                                            "temperature - nighttime Reco| x sqrt(w), w the "
                                            "weight the night data give the other temperature "
                                            "(BIC); in the totals of all partitioned fluxes "
                                            "(NaN without soil temperature)"),
    "reco_uncertainty_respiration_form": (CARBON, "1 sigma: structural error of the nighttime "
                                          "method's Reco and GPP (carbon) from the form of the "
                                          "respiration response: |nighttime Reco with a constant "
                                          "Q10 - nighttime Reco with Lloyd-Taylor| x "
                                          "sqrt(w (1 - w)) about their w-weighted average "
                                          "(respiration_form = average), x sqrt(w) about "
                                          "Lloyd-Taylor (lloyd_taylor), w the weight the night "
                                          "data give the constant Q10 (BIC); in the nighttime "
                                          "totals (NaN where the Q10 fit fails)"),
    "reco_daytime_uncertainty_respiration_form": (CARBON, "1 sigma: structural error of the "
                                                  "daytime method's Reco and GPP (carbon) from "
                                                  "the form of the respiration response, which "
                                                  "stays Lloyd-Taylor: |nighttime Reco with a "
                                                  "constant Q10 - with Lloyd-Taylor| x sqrt(w); "
                                                  "in the daytime totals (NaN where the Q10 fit "
                                                  "fails)"),
}
for _flux in ("gpp_daytime", "reco_daytime"):
    UNCERTAINTY_COLUMNS[f"{_flux}_uncertainty_light_shape"] = (
        CARBON, f"1 sigma: structural error of {_flux} (carbon) from the shape of the light "
        f"response: |{_flux} with the curvature profiled on the record - with the "
        "rectangular hyperbola| x 1/2, the two shapes' spread about their equal-weight "
        "average; in the daytime totals; written with daytime_curvature = average only")
UNCERTAINTY_COLUMNS |= {
    "reco_uncertainty_partitioning": (CARBON, "1 sigma: structural error of the "
                                      "partitioned fluxes (carbon): E = d^2 - p_day^2 - "
                                      "p_night^2 of d = daytime - nighttime of GPP and of "
                                      "Reco less the methods' own parts, s = sqrt(max(E_gpp "
                                      "+ E_reco, 0) / 4), one s for GPP and Reco (nighttime "
                                      "GPP = Reco - NEE); in the totals of both methods"),
    "uncertainty_parts_missing": ("", "parts of the budget that could not be estimated this "
                                  "year (left out of the totals and intervals)"),
    "net_uptake_t_co2_per_ha": (METADATA_TONNES_PER_HECTARE, "net CO2 uptake in the year in "
                                "tonnes of CO2 per hectare, positive = uptake "
                                "(= -NEE x 44.009/12.011 x 0.01)"),
    "net_uptake_t_co2_per_ha_uncertainty": (METADATA_TONNES_PER_HECTARE, "1 sigma: total "
                                            "uncertainty of the net uptake, tonnes of CO2 per "
                                            "hectare (nee_uncertainty_total converted)"),
    "net_uptake_t_co2_per_ha_uncertainty_random": (METADATA_TONNES_PER_HECTARE, "1 sigma: "
                                                   "random part of the uncertainty of the net "
                                                   "uptake, tonnes of CO2 per hectare"),
}
#: The use mistake of summing period sigmas as independent (round mistakes48): the errors
#: of neighbouring days and months share gap fills, the u* threshold and the fitted
#: parameters, so the root sum of squares of the daily sigmas understated the grassland
#: example's annual 1 sigma by a factor 1.7 for NEE (5.3 against 9.2 g C m-2) and 4.6 for
#: nighttime Reco (4.6 against 21.3).
_SHARED_BETWEEN_PERIODS = ("the errors of neighbouring periods are correlated, so the "
                           "root sum of squares of these sigmas understates a longer "
                           "period's: take that period's own sigma (annual: "
                           "{flux}_uncertainty_total)")
for _flux in _FLUXES:
    UNCERTAINTY_COLUMNS[f"{_flux}_uncertainty_ustar"] = (
        CARBON, f"1 sigma: u* threshold part of {_flux} (carbon): range over the u* scenario "
        "runs / span of their standard-normal quantiles")
    UNCERTAINTY_COLUMNS[f"{_flux}_uncertainty_total"] = (
        CARBON, f"1 sigma: root sum of squares of the parts of {_flux} (carbon; "
        f"{_TOTAL_PARTS[_flux]}); {_NOT_COVERED}")
    UNCERTAINTY_COLUMNS[f"{_flux}_sigma"] = (
        CARBON, f"1 sigma: total uncertainty of the {_flux} sum of the period (carbon; "
        f"combining the parts the annual table states per budget year ({_TOTAL_PARTS[_flux]}), "
        f"which are not written per period); {_NOT_COVERED}; "
        + _SHARED_BETWEEN_PERIODS.format(flux=_flux))
    for _end, _sign, _word in (("low", "-", "lower"), ("high", "+", "upper")):
        UNCERTAINTY_COLUMNS[f"{_flux}_ci95_{_end}"] = (
            CARBON, f"{_word} end of the stated 95 % interval of the annual {_flux} sum "
            f"(carbon; sum {_sign} 1.96 x {_flux}_uncertainty_total); {_NOT_COVERED}")
for _flux in _FLUXES[1:]:
    UNCERTAINTY_COLUMNS[f"{_flux}_uncertainty_parameters"] = (
        CARBON, f"1 sigma: fitted-parameter part of {_flux} (carbon): "
        f"{_PARAMETER_PARTS[_flux]}")
del _flux, _end, _sign, _word

#: Unit and description of the random-error model tables
#: (:class:`fluxpart.uncertainty.RandomErrorModel`).
RANDOM_ERROR_MODEL_COLUMNS: dict[str, tuple[str, str]] = {
    "flux_class": ("", "uptake (NEE < 0) or release (NEE >= 0)"),
    "intercept": (FLUX, "random error model: standard deviation at |NEE| = 0 (CO2)"),
    "slope": ("1", "random error model: increase of the standard deviation per unit |NEE|"),
    "lowest_abs_nee": (FLUX, "smallest binned mean |NEE| (CO2); the model is not extrapolated "
                       "below"),
    "floor": (FLUX, "smallest standard deviation the model returns (smallest binned value)"),
    "pairs": ("1", "record pairs 24 h apart under similar conditions"),
    "bins": ("1", "flux bins the line was fitted to"),
    "source": ("", "fitted, constant (one bin), or borrowed from the other flux class"),
    "bin": ("1", "flux bin number within its class, by increasing |NEE|"),
    "mean_abs_nee": (FLUX, "mean |NEE| of the pairs in the bin (pair means, CO2)"),
    "sigma": (FLUX, "standard deviation of the pair differences / sqrt(2) (CO2)"),
    "laplace_scale": (FLUX, "Laplace scale: mean |pair difference| / sqrt(2) (CO2)"),
    "record_class": ("", "night or day records (gap-filling error model)"),
    "bias": (FLUX, "gap filling: mean error per filled record on artificial gaps (fill minus "
             "measured, CO2)"),
    "bias_se": (FLUX, "standard error of the gap-filling bias (CO2)"),
    "independent_variance": ("umol2 m-4 s-2", "gap filling: error variance per record "
                             "independent of its neighbours (a in a n + b n^2)"),
    "correlated_variance": ("umol2 m-4 s-2", "gap filling: error variance shared by every "
                            "record of a gap (b in a n + b n^2)"),
    "correlated_variance_long": ("umol2 m-4 s-2", "gap filling: error variance shared by "
                                 "every record of a 7-day block of a gap of 1 to 7 days (b for "
                                 "such gaps, scored on artificial gaps of the site's own gap "
                                 "lengths of 1 to 7 days)"),
    "block_covariance_long": ("umol2 m-4 s-2", "gap filling: error covariance of two filled "
                              "records of one class in different 7-day blocks of one gap "
                              "of 1 to 7 days (0: such a gap is one block)"),
    "correlated_variance_weeks": ("umol2 m-4 s-2", "gap filling: as correlated_variance_long, "
                                  "for gaps of 7 to 28 days"),
    "block_covariance_weeks": ("umol2 m-4 s-2", "gap filling: as block_covariance_long, for "
                               "gaps of 7 to 28 days"),
    "correlated_variance_months": ("umol2 m-4 s-2", "gap filling: as correlated_variance_long, "
                                   "for gaps longer than 28 days"),
    "block_covariance_months": ("umol2 m-4 s-2", "gap filling: as block_covariance_long, for "
                                "gaps longer than 28 days"),
    "size_reference_long": (FLUX, "gap filling: the class's mean |NEE| over its measured records; "
                            "in a gap longer than one day a fill counts max(|fill| / this, 1) "
                            "in the shared error (CO2)"),
    "neighbour_covariance": ("umol2 m-4 s-2", "gap filling: error covariance of two filled "
                             "records of one class (night or day) in different gaps at most 7 days apart"),
    "gaps": ("1", "artificial gaps scored"),
    "long_gap_blocks": ("1", "7-day blocks of artificial gaps longer than one day scored"),
    "day_night_correlation": ("1", "gap filling: correlation of the shared fill errors of the "
                                   "night and the day records of one gap of a day or less"),
    "day_night_correlation_long": ("1", "gap filling: correlation of the shared fill errors of "
                                        "the night and the day records of one 7-day block of a "
                                        "gap longer than a day"),
    "records": ("1", "held-out measured records scored"),
}


def _reason_column(code: int, name: str) -> str:
    return "screening_kept" if code == 0 else f"rejected_{name}"


_CARBON_ABS = f"{_CARBON_SUM} (CO2 flux converted to carbon)"

#: Unit and description of every column of the audit table (:mod:`fluxpart.audit`).
AUDIT_COLUMNS: dict[str, tuple[str, str]] = {
    "year": ("", _AUDIT_YEAR),
    "records_present": ("1", "records (rows) of the year in the timeseries"),
    **{_reason_column(code, name): ("1", "records whose NEE passed screening and the u* filter"
                                    if code == 0 else
                                    f"records whose NEE was first rejected as "
                                    f"{name.replace('_', ' ')}")
       for code, name in enumerate(REASON_LABELS)},
    "nee_measured": ("1", "records whose budget NEE is the measured value"),
    "nee_filled_a": ("1", "records whose NEE was gap-filled with quality A"),
    "nee_filled_b": ("1", "records whose NEE was gap-filled with quality B"),
    "nee_filled_c": ("1", "records whose NEE was gap-filled with quality C"),
    "nee_unfilled": ("1", "records whose NEE could not be filled"),
    "abs_nee_measured": (CARBON, f"sum of |NEE| over measured records, {_CARBON_ABS}"),
    "abs_nee_filled": (CARBON, f"sum of |NEE| over gap-filled records, {_CARBON_ABS}"),
    "abs_nee_share_measured": ("1", "share of the sum of |NEE| from measured records"),
    "abs_nee_share_filled": ("1", "share of the sum of |NEE| from gap-filled records"),
}

_SCREENING = {
    "reason": ("", f"screening outcome of NEE records: {_REASONS_TEXT}"),
    "records": ("1", "records of the whole input with this outcome (rejections counted under "
                "their first reason)"),
}


def _driver(name: str):
    variable = VARIABLES[name]
    return udunits(variable.unit), variable.description


_PATTERNS = [
    (r"(rg|tair|vpd|tsoil)_filled", lambda m: (_driver(m[1])[0],
                                               f"gap-filled {_driver(m[1])[1]}")),
    (r"(rg|tair|vpd|tsoil)_fill_quality", lambda m: ("", f"fill quality of {m[1]}: "
                                                     f"{_QUALITY_TEXT}")),
    (r"(\w+)_out_of_range", lambda m: ("1", f"{m[1]} outside its plausible range")),
    (r"nee_site_flag", lambda m: ("1", "rejected by the site's own flag")),
    (r"nee_spike", lambda m: ("1", "rejected as a spike (Papale et al. 2006)")),
    (r"nee_low_ustar", lambda m: ("1", "night record with u* below the threshold")),
    (r"nee_morning_release", lambda m: ("1", "day record within 3 h after a calm night, "
                                        "excluded for the release of CO2 stored that night")),
    (r"rg_above_potential", lambda m: ("1", "Rg above potential radiation by more than the "
                                       "margin")),
    (r"(gpp|reco|nee)_(nighttime|daytime|filled)_(random_error|uncertainty|sigma)",
     lambda m: (FLUX, f"one standard deviation of the record's {_NAMES[m[1]]} "
                f"({m[2]}), CO2")),
]

_FLUX_PATTERN = "|".join(_FLUXES)
_BUDGET_PATTERNS = [
    (rf"({_FLUX_PATTERN})_ustar_(p[\d.]+)",
     lambda m: (CARBON, f"{m[1]} summed ({_CARBON_SUM}) with the u* threshold at bootstrap "
                f"percentile {m[2][1:]}")),
    (rf"({_FLUX_PATTERN})_ustar_seasonal",
     lambda m: (CARBON, f"{m[1]} summed ({_CARBON_SUM}) with each season at its own u* "
                "threshold where higher than the year's (run only where the seasons' "
                "thresholds clearly differ and ustar_distinct_seasons = uncertainty_only)")),
    (rf"({_FLUX_PATTERN})_ustar_year",
     lambda m: (CARBON, f"{m[1]} summed ({_CARBON_SUM}) with the year's u* threshold on every "
                "night (run only where the seasons' thresholds clearly differ and each season "
                "was filtered at its own)")),
    (rf"({_FLUX_PATTERN})_ustar_spread",
     lambda m: (CARBON, f"{m[1]} ({_CARBON_SUM}): max - min over the u* threshold scenarios")),
    (rf"({_FLUX_PATTERN})_ci95_(low|high)",
     lambda m: (CARBON, f"{'lower' if m[2] == 'low' else 'upper'} end of the stated 95 % "
                f"interval of {m[1]} ({_CARBON_SUM}) from every uncertainty part the product "
                "quantifies; the parts it cannot quantify are listed in the manifest "
                "(provenance, uncertainty, not_quantified)")),
    (rf"({_FLUX_PATTERN})_(random_error|uncertainty|sigma)",
     lambda m: (CARBON, f"one standard deviation of the period's {m[1]} sum ({_CARBON_SUM})")),
    (rf"({_FLUX_PATTERN}|gpp|reco)_uncertainty_(\w+)",
     lambda m: (CARBON, f"1 sigma: the {m[2].replace('_', ' ')} part of the uncertainty of "
                f"{m[1]} ({_CARBON_SUM})")),
    # the sign as README's one convention says it (GPP and Reco positive magnitudes;
    # modeller52: the sums said ">= 0" but not which way is uptake)
    (r"gpp_nighttime", lambda m: (CARBON, f"GPP summed over the period, nighttime method "
                                  f"({_CARBON_SUM}); positive = uptake by photosynthesis; "
                                  "can be slightly negative in dormant periods (see the "
                                  "timeseries column)")),
    (r"gpp_daytime", lambda m: (CARBON, f"GPP summed over the period, daytime method "
                                f"({_CARBON_SUM}); positive = uptake by photosynthesis, "
                                ">= 0")),
    (r"reco_(nighttime|daytime)", lambda m: (CARBON, f"Reco summed over the period, {m[1]} "
                                             f"method ({_CARBON_SUM}); positive = release "
                                             "to the atmosphere, >= 0")),
    (r"(gpp|reco)_method_difference", lambda m: (CARBON, f"{_NAMES[m[1]]} daytime minus "
                                                 f"nighttime ({_CARBON_SUM})")),
    (r"(gpp|reco)_relative_difference", lambda m: ("1", f"{_NAMES[m[1]]} (daytime - nighttime) "
                                                   "/ mean of both")),
    (r"methods_agree", lambda m: ("1", "daytime and nighttime GPP and Reco within the "
                                  "agreement margin")),
]

_PARAMETERS = {
    "row": ("1", "row number"),
    "window_start": ("", "first instant of the window"),
    "window_end": ("", "end of the window (exclusive)"),
    "window_centre": ("", "centre of the window; parameters are assigned here"),
    "year": ("", "calendar year"),
    "season": ("", "season name"),
    "points": ("1", "records used in the fit"),
    "temperature_range": ("K", "range of temperature in the window"),
    "e0": ("K", "Lloyd–Taylor temperature sensitivity"),
    "e0_se": ("K", "standard error of E0"),
    "rref": (FLUX, "reference respiration at 10 °C (CO2)"),
    "rref_se": (FLUX, "standard error of Rref (CO2)"),
    "alpha": ("umol J-1", "initial slope of the light response (canopy light-use efficiency, "
              "µmol CO2 per joule of global radiation)"),
    "alpha_se": ("umol J-1", "standard error of alpha"),
    "beta0": (FLUX, "maximum assimilation of CO2 at light saturation below the VPD limit"),
    "beta0_se": (FLUX, "standard error of beta0"),
    "k": ("hPa-1", "VPD limitation coefficient"),
    "k_se": ("hPa-1", "standard error of k"),
    "rmse": (FLUX, "root-mean-square residual of the fit (CO2)"),
    "accepted": ("1", "fit accepted"),
    "reason": ("", "why a fit was rejected or replaced, or a note on an accepted one"),
    "status": ("", "daytime window: accepted (own fit), replaced (refit with Rref fixed at the "
               "night Rref) or rejected (parameters interpolated from neighbouring windows)"),
    "e0_points": ("1", "night records of the window's own E0 fit (0 where too few)"),
    "e0_window_days": ("d", "width of the night window centred on the daytime window of its "
                       "own E0 fit (empty where too few records)"),
    "e0_window": ("K", "the window's own E0 estimate, which entered the year's pool"),
    "e0_window_se": ("K", "standard error of the window's own E0 estimate"),
    "e0_source": ("", "E0 pooled over the windows of the year (year) or of all years "
                  "(all_years), the e0_fallback setting (fallback), or supplied by the caller"),
    "rref_night": (FLUX, "Rref of the window's night NEE with its E0, least squares (CO2)"),
    "rref_night_se": (FLUX, "standard error of the night Rref (CO2)"),
    "weighted": ("1", "fit weighted by the random error of NEE"),
    "curvature": ("1", "curvature of the light response (0: rectangular hyperbola, Lasslop et "
                  "al. 2010; above 0: non-rectangular hyperbola)"),
    "k_fixed": ("1", "k fixed at 0 (not identifiable)"),
    "threshold": ("m s-1", "u* threshold"),
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
    "windows_used": ("1", "windows in the year's E0: the 15-day windows of the joint fit "
                          "(source joint) or the accepted windows averaged (source fitted)"),
    "windows_tried": ("1", "E0 windows fitted in the year"),
    "source": ("", "where the value came from (nighttime Rref windows: night records, or "
               "low_light for a long run of windows without night, fitted at Rg below "
               "rref_low_light_rg)"),
}


def describe(table: str, column: str,
             year_start: str | None = CALENDAR_YEAR_START) -> tuple[str, str]:
    """Return ``(unit, description)`` of `column` in output table `table`.

    Parameters
    ----------
    table : str
        ``"timeseries"``, ``"daily"``, ``"monthly"``, ``"annual"``, ``"audit"``,
        ``"screening"``, ``"ustar"``, ``"parameters"`` or a parameter table's file name
        (``"parameters_daytime"``, ...).
    column : str
        Column name.
    year_start : str or None
        First day of the budget year, "MM-DD" ([processing] year_start), which the
        ``year`` of the annual and audit tables is labelled by; None for a table of
        several sites, each with its own.

    Returns
    -------
    tuple of str
        A UDUNITS-2 unit (``"1"`` for counts, flags and shares; ``""`` where none
        applies or the column is unknown) and a one-line description.
    """
    if column == "year" and table in ("annual", "audit") \
            and year_start != CALENDAR_YEAR_START:
        what = "label of the budget year" if table == "annual" else \
            "budget year of the interval starts"
        return "", f"{what}: {_budget_year_text(year_start)} (local standard time)"
    if table == "timeseries":
        if column in VARIABLES:
            variable = VARIABLES[column]
            # NEE as read keeps its gaps: a sum or mean of it is no budget (round
            # mistakes48: the example's records summed gave -342 for -242 g C m-2)
            gaps = ("; as read, with its gaps: sums and means of it are not budgets (the "
                    "gap-filled series is nee_filled)" if column == "nee" else "")
            return udunits(variable.unit), f"input: {variable.description}{gaps}"
        exact, patterns = _TIMESERIES, _PATTERNS
    elif table in ("daily", "monthly", "annual"):
        exact, patterns = {**_BUDGET, **UNCERTAINTY_COLUMNS}, _BUDGET_PATTERNS
    elif table == "audit":
        exact, patterns = AUDIT_COLUMNS, []
    elif table == "screening":
        exact, patterns = _SCREENING, []
    elif table == "parameters" and column in _SCREENING:
        # a writer that names every parameter-like table "parameters" cannot tell the
        # screening table from the fit tables: say what the column means in both
        unit, text = _SCREENING[column]
        if column in _PARAMETERS:
            text = f"{_PARAMETERS[column][1]} (fit tables); in the screening table: {text}"
        return unit, text
    else:
        exact, patterns = {**RANDOM_ERROR_MODEL_COLUMNS, **_PARAMETERS}, []
    if column in exact:
        return exact[column]
    for pattern, rule in patterns:
        match = re.fullmatch(pattern, column)
        if match:
            return rule(match)
    return "", ""


def units_for_table(table: str, columns,
                    year_start: str | None = CALENDAR_YEAR_START) -> dict[str, tuple[str, str]]:
    """Return column -> (unit, description) for every column of a table (`year_start`
    as :func:`describe` takes it)."""
    return {column: describe(table, column, year_start) for column in columns}


class RewordedDescription(NamedTuple):
    """A description a release reworded, and the exact text the releases before it wrote.

    Attributes
    ----------
    release : str
        The release whose code first writes the new wording.
    tables : tuple of str or None
        The tables whose column it describes; None: every table of a result folder.
    column : str or None
        The column; None: the tables' ``time_convention`` (the file metadata's fact).
    earlier : str
        The text, character for character, that the releases before `release` wrote.
    """

    release: str
    tables: tuple[str, ...] | None
    column: str | None
    earlier: str


_BUDGET_TABLES = ("daily", "monthly", "annual")
#: Descriptions reworded since a release, with the text the releases before wrote:
#: ``fluxpart verify`` takes a folder's description that reads exactly as its entry's
#: `earlier` as the writing release's wording of the same column (a note), where any
#: other description that differs from this code's is a difference (an edited folder).
#: Alongside :data:`fluxpart.config.ADDED_SETTINGS`: a release that rewords a
#: description adds its entry here in the same commit.
REWORDED_DESCRIPTIONS = (
    # budget years under another year_start (metadata52): "the calendar year of the
    # interval starts" and "a year is the set of intervals that start in it" are wrong
    # where budget year 2018 of a 10-01 run holds the records of 2018-10 to 2019-09
    RewordedDescription("0.35.0", ("annual",), "year", _ANNUAL_YEAR),
    RewordedDescription("0.35.0", ("audit",), "year", _AUDIT_YEAR),
    RewordedDescription("0.35.0", None, None, TIME_CONVENTION),
    # the sign of the budget tables' GPP and Reco sums (metadata52)
    RewordedDescription("0.35.0", _BUDGET_TABLES, "gpp_nighttime",
                        f"GPP summed over the period, nighttime method ({_CARBON_SUM}); can "
                        "be slightly negative in dormant periods (see the timeseries column)"),
    RewordedDescription("0.35.0", _BUDGET_TABLES, "gpp_daytime",
                        f"GPP summed over the period, daytime method ({_CARBON_SUM}), >= 0"),
    *(RewordedDescription("0.35.0", _BUDGET_TABLES, f"reco_{method}",
                          f"Reco summed over the period, {method} method ({_CARBON_SUM}), "
                          ">= 0")
      for method in ("nighttime", "daytime")),
)


def reworded(table: str, column: str | None, stored: str) -> RewordedDescription | None:
    """The entry of :data:`REWORDED_DESCRIPTIONS` whose earlier text `stored` is.

    Parameters
    ----------
    table : str
        The table (a result folder's table name, e.g. ``"annual"``,
        ``"parameters_daytime"``).
    column : str or None
        The column described; None for the table's ``time_convention``.
    stored : str
        The text the folder's file holds.

    Returns
    -------
    RewordedDescription or None
        The entry naming the release that reworded it; None where `stored` is no
        earlier release's wording of that column (an edit, or this code's own text).
    """
    for entry in REWORDED_DESCRIPTIONS:
        if entry.column == column and entry.earlier == stored \
                and (entry.tables is None or table in entry.tables):
            return entry
    return None


def as_labels(codes, labels: dict[int, str]) -> pd.Categorical:
    """Turn integer codes into a categorical of their labels (a dictionary-encoded column).

    Parameters
    ----------
    codes : array_like of int
        The codes, e.g. fill-quality or rejection-reason codes.
    labels : dict of int to str
        Every code and its label. The categories are all labels, in the order of
        the non-negative codes, then the negative ones (``"unfilled"`` last), so the
        column's dictionary does not depend on which codes occur.

    Returns
    -------
    pandas.Categorical
        One label per code.

    Raises
    ------
    ValueError
        If a code has no label (a programming error, not user input).
    """
    values = np.asarray(codes)
    order = sorted(labels, key=lambda code: (code < 0, abs(code)))
    unknown = np.setdiff1d(np.unique(values), np.asarray(order))
    if unknown.size:
        raise ValueError(f"codes without a label: {unknown.tolist()}")
    # the position in `order` of every code, from one array indexed by code - lowest
    lowest = min(order)
    position = np.zeros(max(order) - lowest + 1, dtype=np.int64)
    position[np.asarray(order) - lowest] = np.arange(len(order))
    indices = position[values.astype(np.int64) - lowest]
    return pd.Categorical.from_codes(indices, categories=[labels[c] for c in order])


def as_codes(values, labels: dict[int, str]) -> np.ndarray:
    """Return integer codes of a column given as codes or as their labels.

    The inverse of :func:`as_labels`, so that stage functions accept a result's
    labelled columns as well as the codes they compute with.

    Parameters
    ----------
    values : array_like or pandas.Series
        Integer codes, or labels (strings or a categorical).
    labels : dict of int to str
        Every code and its label.

    Returns
    -------
    numpy.ndarray
        Float codes; NaN where a value is missing or neither a code nor a label.
    """
    series = pd.Series(values) if not isinstance(values, pd.Series) else values
    if pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series):
        return series.to_numpy(dtype=float, na_value=np.nan)
    code_of = {label: float(code) for code, label in labels.items()}
    if isinstance(series.dtype, pd.CategoricalDtype):
        table = np.array([code_of.get(c, np.nan) for c in series.cat.categories] + [np.nan])
        return table[series.cat.codes.to_numpy()]      # code -1 (missing) -> the NaN slot
    return np.array([code_of.get(v, np.nan) if isinstance(v, str) else
                     (float(v) if isinstance(v, (int, float, np.number)) else np.nan)
                     for v in series.astype(object)], dtype=float)


def file_metadata(site, interval_minutes: int | None,
                  year_start: str | None = CALENDAR_YEAR_START) -> dict:
    """Return the site and time facts every Parquet table of a result carries.

    Parameters
    ----------
    site : fluxpart.Site or dict
        The tower: name, latitude [degrees north], longitude [degrees east],
        utc_offset [h] of the local standard time.
    interval_minutes : int or None
        Record length [min] (30 or 60); None if unknown.
    year_start : str or None
        First day of the budget year, "MM-DD" ([processing] year_start), which the
        time convention states (:func:`time_convention`).

    Returns
    -------
    dict
        ``{"site": {...}, "interval_minutes": ..., "time_convention": ...}``, for the
        ``metadata`` argument of :func:`fluxpart.store.write_table`.
    """
    record = site if isinstance(site, dict) else site.to_dict()
    return {
        "site": {key: record.get(key) for key in ("name", "latitude", "longitude",
                                                  "utc_offset")},
        "interval_minutes": None if interval_minutes is None else int(interval_minutes),
        "time_convention": time_convention(year_start),
    }


def with_metadata(frame, table: str, facts: dict,
                  year_start: str | None = CALENDAR_YEAR_START):
    """Return a shallow copy of `frame` (a DataFrame or Series) whose ``attrs`` describe it.

    ``attrs`` gets `facts` (from :func:`file_metadata`), the table name, and
    ``units`` and ``descriptions`` of every column and of the index, as
    :func:`fluxpart.store.read_table` gives them for a loaded table; the Parquet
    writer stores the same facts in the file. `year_start` as :func:`describe` takes it.
    """
    out = frame.copy(deep=False)
    names = frame.columns if isinstance(frame, pd.DataFrame) else [frame.name]
    columns = [*([frame.index.name] if frame.index.name else []), *map(str, names)]
    described = units_for_table(table, columns, year_start)
    out.attrs.update({**facts, "table": table,
                      "units": {c: unit for c, (unit, _) in described.items()},
                      "descriptions": {c: text for c, (_, text) in described.items()}})
    return out
