"""The result's tables built from the stage outputs: time series, budgets, counts.

The per-record time series (the input, solar geometry, screening flags and reasons, the
u* filter, the drivers' and NEE's fills, both partitionings), the daily, monthly and
annual budgets with the methods' agreement and the u* runs' spread, the screening
counts, and the :class:`~fluxpart.result.Result` with each table's metadata
(:mod:`fluxpart.schema`). Assembly only: the sums are :mod:`fluxpart.budget`'s and
:mod:`fluxpart.agreement`'s.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from . import agreement, budget, gapfill, schema, screening, uncertainty
from .result import Result
from .uncertainty_assembly import scenario_spread

#: Budget column of each summed time-series column.
BUDGET_FLUXES = {"nee_filled": "nee", "gpp_nighttime": "gpp_nighttime",
                 "reco_nighttime": "reco_nighttime", "gpp_daytime": "gpp_daytime",
                 "reco_daytime": "reco_daytime"}
#: Rejection-reason codes decided after the u* threshold.
REASON_LOW_USTAR = {name: code for code, name in screening.REASON_CODES.items()}["low_ustar"]
REASON_MORNING_RELEASE = {name: code for code, name
                          in screening.REASON_CODES.items()}["morning_release"]
#: Labels of the fill-quality codes of gap filling (its own mapping).
_QUALITY_LABELS = gapfill.QUALITY_NAMES
#: Labels of the fill-method codes of gap filling.
_METHOD_LABELS = {gapfill.METHOD_UNFILLED: "unfilled", gapfill.METHOD_MEASURED: "measured",
                  gapfill.METHOD_ALL_DRIVERS: "similar_drivers",
                  gapfill.METHOD_RADIATION: "similar_radiation",
                  gapfill.METHOD_DIURNAL_COURSE: "diurnal_course",
                  gapfill.METHOD_INTERPOLATED: "interpolated"}


def labelled(timeseries: pd.DataFrame) -> pd.DataFrame:
    """Rejection reason, fill method and fill qualities as labelled (dictionary) columns.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The time series with the integer codes.

    Returns
    -------
    pandas.DataFrame
        A copy whose coded columns hold their labels (:func:`fluxpart.schema.as_labels`).
    """
    labels = {"rejection_reason": screening.REASON_CODES, "nee_fill_method": _METHOD_LABELS}
    labels.update({c: _QUALITY_LABELS for c in timeseries.columns if c.endswith("_fill_quality")})
    return timeseries.assign(**{column: schema.as_labels(timeseries[column].to_numpy(), names)
                                for column, names in labels.items()
                                if column in timeseries.columns})


def timeseries_table(inputs, geometry, screens, central, released, threshold):
    """The per-record table of a run and each record's rejection reason.

    Parameters
    ----------
    inputs : fluxpart.ustar_runs.RunInputs
        The prepared record, its night mask and filled drivers.
    geometry : pandas.DataFrame
        Solar geometry per record.
    screens : fluxpart.screening.Screening
        The screening's flags and reasons (before the u* filter).
    central : fluxpart.ustar_runs.RunOutcome
        The central u* run.
    released : numpy.ndarray of bool
        The measured records excluded as a morning release.
    threshold : numpy.ndarray
        The central run's u* threshold per record [m s-1].

    Returns
    -------
    timeseries : pandas.DataFrame
        The input, geometry, flags, reasons, drivers, NEE fill and both partitionings.
    reason : numpy.ndarray
        Rejection-reason code per record (:data:`fluxpart.screening.REASON_CODES`).
    """
    frame, _, filled_drivers, _, is_night = inputs[:5]
    too_calm, nee_measured, filled = central.too_calm, central.nee_measured, central.filled
    night, day = central.night, central.day
    flags = screens.flags.assign(nee_low_ustar=too_calm, nee_morning_release=released)
    reason = screens.reason.to_numpy().copy()
    reason[(reason == 0) & too_calm] = REASON_LOW_USTAR
    reason[(reason == 0) & released] = REASON_MORNING_RELEASE
    timeseries = pd.concat([
        frame,
        geometry,
        pd.DataFrame({"is_night": is_night}, index=frame.index),
        flags,
        pd.DataFrame({"rejection_reason": reason.astype(np.int8),
                      "ustar_threshold": threshold,
                      "nee_measured": nee_measured}, index=frame.index),
        filled_drivers,
        filled.rename(columns=lambda c: "nee_filled" if c == "value" else f"nee_fill_{c}"),
        pd.DataFrame({"reco_nighttime": night.reco, "gpp_nighttime": night.gpp,
                      "rref_nighttime": night.rref, "e0_nighttime": night.e0,
                      "reco_daytime": day.reco, "gpp_daytime": day.gpp}, index=frame.index),
    ], axis=1)
    return timeseries, reason


class BudgetTables(NamedTuple):
    """The daily, monthly and annual budgets with the methods' agreement.

    Attributes
    ----------
    daily, monthly, annual : pandas.DataFrame
        Sums [g C m-2] and coverage; the annual table with the year's u* threshold
        and each u* run's sums and spread.
    warnings : list of str
        Budget years where the two partitioning methods disagree.
    """

    daily: pd.DataFrame
    monthly: pd.DataFrame
    annual: pd.DataFrame
    warnings: list


def budget_tables(timeseries, interval, config, outcomes, year_threshold, year_keys):
    """Sum the time series per day, month and budget year; compare the methods.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The per-record table (:func:`timeseries_table`).
    interval : int
        Record interval [minutes].
    config : Config
        Settings (``year_start``, ``agreement_margin``).
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        Every u* run (their budget-year spread).
    year_threshold : numpy.ndarray
        The central threshold of each record's year [m s-1].
    year_keys : numpy.ndarray
        Budget year of each record.

    Returns
    -------
    BudgetTables
    """
    budgets = budget.aggregate(timeseries, interval, fluxes=BUDGET_FLUXES,
                               year_start=config.year_start)
    # year_keys: budget year of each record ([processing] year_start); u* thresholds and
    # the annual E0 stay per calendar year of data
    daily = agreement.method_agreement(budgets.daily, config.agreement_margin)
    monthly = agreement.method_agreement(budgets.monthly, config.agreement_margin)
    annual = agreement.method_agreement(budgets.annual, config.agreement_margin)
    warnings = list(agreement.disagreements(annual, config.agreement_margin))
    # the year's detected threshold (seasons filtered higher are in the time series)
    annual = annual.assign(ustar_threshold=pd.Series(year_threshold).groupby(year_keys)
                           .max().reindex(annual.index).to_numpy())
    annual = scenario_spread(annual, outcomes, timeseries.index, interval, year_keys)
    return BudgetTables(daily, monthly, annual, warnings)


def screening_counts(counts, reason) -> pd.Series:
    """Records per screening reason, with those decided after the u* threshold.

    Parameters
    ----------
    counts : pandas.Series
        The screening's counts (before the u* filter).
    reason : numpy.ndarray
        Rejection-reason code per record (:func:`timeseries_table`).

    Returns
    -------
    pandas.Series
    """
    counts = counts.copy()
    counts[screening.REASON_CODES[REASON_LOW_USTAR]] = int((reason == REASON_LOW_USTAR).sum())
    counts[screening.REASON_CODES[REASON_MORNING_RELEASE]] = int(
        (reason == REASON_MORNING_RELEASE).sum())
    counts[screening.REASON_CODES[0]] = int((reason == 0).sum())
    return counts


def run_provenance(provenance, checked, driver, form, night_light=(), shape=None) -> dict:
    """The run's provenance: the caller's, then the screening, clock, preflight and choices.

    Parameters
    ----------
    provenance : dict or None
        The caller's facts about the input.
    checked : fluxpart.screening_stage.ScreenedRecord
        The screening thresholds, the clock record and the preflight findings.
    driver : fluxpart.respiration_driver.DriverDecision
        The respiration temperature and its choice.
    form : fluxpart.partition.respiration_form.FormAverage
        The respiration forms' average.
    night_light : list of dict, optional
        The central fill's yearly tests of night NEE on the preceding day's light
        (:func:`fluxpart.preceding_light.test_records`), as ``"night_fill_light"``.
    shape : fluxpart.partition.light_shape.ShapeAverage, optional
        The daytime light-response shapes' average (``daytime_curvature = "average"``),
        as ``"light_shape"``; absent otherwise.

    Returns
    -------
    dict
    """
    shaped = {} if shape is None else {"light_shape": shape.to_dict()}
    return {**(provenance or {}), "screening": checked.screens.thresholds,
            "clock": checked.clock_record,
            "preflight": [str(f) for f in checked.findings],
            "respiration_driver": ({"setting": driver.temperature} if driver.choice is None
                                   else driver.choice.to_dict()),
            "respiration_form": form.to_dict(), **shaped,
            "night_fill_light": list(night_light),
            "uncertainty": {"confidence": uncertainty.CONFIDENCE,
                            "not_quantified": list(uncertainty.NOT_QUANTIFIED),
                            "checked": uncertainty.CALIBRATION_CHECK}}


def result(site, config, interval, tables, parameters, warnings, provenance) -> Result:
    """The :class:`~fluxpart.result.Result` with each table's metadata.

    Parameters
    ----------
    site : Site
        The tower.
    config : Config
        Settings.
    interval : int
        Record interval [minutes].
    tables : dict of str to pandas.DataFrame or pandas.Series
        ``timeseries``, ``daily``, ``monthly``, ``annual``, ``ustar``, ``audit`` and
        ``screening_counts``.
    parameters : dict of str to pandas.DataFrame
        The parameter tables, in the order they are written.
    warnings : list of str
        The run's warnings in the order they arose.
    provenance : dict
        :func:`run_provenance`.

    Returns
    -------
    Result
    """
    # the budget year's label and the time convention are worded by year_start
    facts = schema.file_metadata(site, interval, config.year_start)

    def described(frame, table):
        return schema.with_metadata(frame, table, facts, config.year_start)

    return Result(
        site=site, config=config,
        timeseries=described(labelled(tables["timeseries"]), "timeseries"),
        daily=described(tables["daily"], "daily"),
        monthly=described(tables["monthly"], "monthly"),
        annual=described(tables["annual"], "annual"),
        ustar=described(tables["ustar"], "ustar"),
        audit=described(tables["audit"], "audit"),
        parameters={name: described(table, f"parameters_{name}")
                    for name, table in parameters.items()},
        screening_counts=described(tables["screening_counts"], "screening"),
        warnings=tuple(warnings),
        provenance=provenance)
