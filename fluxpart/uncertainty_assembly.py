"""The uncertainty of a run's budgets, assembled from the stage outputs.

The random error of NEE (paired observations), the gap-filling error scored on
artificial gaps, the one-sided fills of long gaps, the other respiration temperature's
Reco, the parameter and u* parts: 1-sigma columns of the daily and monthly tables and
the annual uncertainty budget with its 95 % interval (:mod:`fluxpart.uncertainty`);
the budget-year sums of each u* run and their spread (:func:`scenario_spread`).

References
----------
Richardson, A. D. et al. (2006). A multi-site analysis of random error in tower-based
measurements of carbon and energy fluxes. Agricultural and Forest Meteorology 136, 1-18.
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique. Biogeosciences 3, 571-583.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from . import (
    budget,
    driver_mixture,
    gap_sides,
    gapfill,
    method_failure,
    night_donors,
    preceding_light,
    uncertainty,
)
from .errors import FluxpartError, InsufficientDataError
from .method_settings import (
    OTHER_TEMPERATURE,
    damped_delay,
    event_cut,
    fill_nee,
    nighttime_settings,
    respiration_temperature,
)
from .partition import nighttime, temperature_choice


def with_hidden(conditions, hidden):
    """The drivers with the cells an artificial gap hides set missing.

    ``conditions.mask(hidden)`` cell for cell, at a fifth of its cost (a cost paid on
    every round of :func:`fluxpart.uncertainty.artificial_gap_errors`, round speed49).

    Parameters
    ----------
    conditions : pandas.DataFrame
        The drivers the NEE fill compares (numeric columns: ``rg`` [W m-2], ``tair``
        [°C], ``vpd`` [hPa], ...).
    hidden : numpy.ndarray of bool or None
        Shape (records, columns): True where the artificial gap hides the driver.

    Returns
    -------
    pandas.DataFrame
        `conditions` (None: itself), the hidden cells NaN, the columns float64.

    References
    ----------
    Falge, E. et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69 (artificial gaps
    scoring a fill).
    """
    if hidden is None:
        return conditions
    # one (columns x records) block, as pandas keeps a frame's columns
    values = conditions.to_numpy(dtype=float).T.copy()
    values[np.asarray(hidden, dtype=bool).T] = np.nan
    return pd.DataFrame(values.T, index=conditions.index, columns=conditions.columns,
                        copy=False)


def budget_uncertainty(daily, monthly, annual, timeseries, outcomes, sigma, conditions,
                       is_night, night, day, temperature, interval, config, year_keys,
                       night_fits, error_model=None, form=None, delay=0, day_evidence=None,
                       sun_up=None, shape=None, day_mixture=None):
    """1-sigma columns of the daily and monthly tables, the annual budget and 95 % intervals.

    Parameters
    ----------
    daily, monthly, annual : pandas.DataFrame
        The budget tables [g C m-2] (:func:`fluxpart.budget.aggregate`).
    timeseries : pandas.DataFrame
        The central run's time series (``nee_measured``, ``nee_filled`` [µmol m-2 s-1],
        the temperatures [°C], ``rg`` [W m-2], ...).
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        Every u* run's fill and partitionings, by run name (``"central"``, ...).
    sigma : numpy.ndarray
        Random error of each record's NEE (1 sigma) [µmol m-2 s-1].
    conditions : pandas.DataFrame
        The drivers the NEE fill compares (:func:`fluxpart.method_settings.fill_nee`).
    is_night : numpy.ndarray of bool
        The night mask.
    night, day : fluxpart.partition.nighttime.NighttimeResult, fluxpart.partition.daytime.DaytimeResult
        The central run's partitionings.
    temperature : str
        The respiration temperature (``"tair"`` or ``"tsoil"``).
    interval : int
        Record interval [minutes].
    config : Config
        Settings.
    year_keys : numpy.ndarray
        Budget year of each record.
    night_fits : dict
        Nighttime fits on the central measured NEE and the input's temperature columns
        (by driver), reused for the other driver's Reco.
    error_model : fluxpart.uncertainty.RandomErrorModel, optional
        The random-error model of NEE.
    form : fluxpart.partition.respiration_form.FormAverage, optional
        The respiration forms' average and spread.
    delay : int, optional
        Delay of the respiration temperature [records].
    day_evidence : tuple, optional
        (statistic, other temperature's name) of
        :func:`fluxpart.central_run.daytime_driver_evidence`.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in the record, for the fills of the artificial and
        the long gaps as the central fill (:func:`fluxpart.method_settings.fill_nee`).
    shape : fluxpart.partition.light_shape.ShapeAverage, optional
        The daytime light-response shapes' average and spread
        (``daytime_curvature = "average"``).
    day_mixture : tuple, optional
        (share, unclipped draws) of the nights' mixture test of ``daytime_temperature =
        "mixture"`` (:func:`fluxpart.central_run.night_mixture`), for the note of a
        ``mixture_test`` that changed nothing.

    Returns
    -------
    daily, monthly : pandas.DataFrame
        The tables with their 1-sigma columns [g C m-2].
    annual : pandas.DataFrame
        The annual budget with every part of its uncertainty and the stated 95 %
        intervals [g C m-2].
    gapfill_model : pandas.DataFrame
        The gap-filling error model's parameters.
    notes : list of str
        Warnings: a temperature choice the daytime records contradict, a set
        ``mixture_test`` that changed nothing
        (:func:`fluxpart.driver_mixture.unchanged_note`), a long gap whose change of
        state weighs on its year.

    References
    ----------
    Hollinger, D. Y., & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology
    25(7):873-885. doi:10.1093/treephys/25.7.873

    Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the additional
    uncertainty in gap-filled NEE resulting from long gaps in the CO2 flux record.
    Agricultural and Forest Meteorology 147:199-208. doi:10.1016/j.agrformet.2007.06.004
    """
    index = timeseries.index
    nee_measured = timeseries["nee_measured"].to_numpy(dtype=float)
    measured = np.isfinite(nee_measured)
    noise = np.where(measured, sigma, 0.0)
    # the central run's night records that fill no gap (night_donors) fill no artificial
    # gap or long gap's one-sided fill either: the errors scored are those of the fill used
    withheld = outcomes["central"].withheld
    # the records' evenings, which the night-light test of every fill below reads, once
    # (they depend on the stamps alone; ~6 ms a fill on ten site-years, round speed59)
    evening = (preceding_light.evening_days(index)
               if preceding_light.COLUMN in conditions.columns else None)
    # only the held-out records are scored, so only they are filled (the same fills);
    # each artificial gap hides the drivers its real gap lacked
    gap_errors = uncertainty.artificial_gap_errors(
        nee_measured, noise, is_night,
        lambda values, hidden: fill_nee(night_donors.donor_values(values, withheld),
                                        with_hidden(conditions, hidden), index,
                                        is_night, config, gaps=measured & np.isnan(values),
                                        values_only=True, sun_up=sun_up, evening=evening),
        seed=uncertainty.artificial_gap_seed(nee_measured), records_per_day=24 * 60 // interval,
        conditions_missing=conditions.isna().to_numpy())
    gapfill_model = uncertainty.gapfill_error_model(gap_errors, records_per_day=24 * 60 // interval)
    # each long gap filled from one side only: a change of the canopy within it
    sides = gap_sides.one_sided_fills(
        nee_measured, *gap_sides.long_gaps(~measured, 24 * 60 // interval,
                                           breaks=gapfill.event_breaks(index, config.events)),
        lambda values, gaps: fill_nee(night_donors.donor_values(values, withheld), conditions,
                                      index, is_night, config, gaps=gaps, values_only=True,
                                      sun_up=sun_up, evening=evening))
    runs = {name: pd.DataFrame({"nee": run.filled["value"].to_numpy(),
                                "gpp_nighttime": run.night.gpp, "reco_nighttime": run.night.reco,
                                "gpp_daytime": run.day.gpp, "reco_daytime": run.day.reco},
                               index=index)
            for name, run in outcomes.items()}
    nee_filled = timeseries["nee_filled"].to_numpy(dtype=float)
    settings = nighttime_settings(config, timeseries["rg"].to_numpy(dtype=float), index,
                                  method_failure.borrowed_e0(night), sun_up)

    def refit(fit, driver):
        """Reco of `fit` (partition_nighttime's arguments) on `driver`; None if it fails."""
        try:
            return fit(index, nee_measured, nee_filled, measured_in_range(timeseries, driver),
                       timeseries[f"{driver}_filled"].to_numpy(dtype=float), is_night,
                       respiration_driver=driver, **settings)
        except FluxpartError:
            return None

    other = OTHER_TEMPERATURE[temperature]
    other_reco = None
    if method_failure.failed(night):
        pass                     # no nighttime Reco to compare the other driver's with
    elif delay and "tair_undelayed" in night_fits:
        # the other candidate of a delayed air temperature is the undelayed one
        try:
            other_reco = nighttime.apply_fit(
                night_fits["tair_undelayed"], nee_filled,
                timeseries["tair_filled"].to_numpy(dtype=float)).reco
        except FluxpartError:
            other_reco = None
    elif f"{other}_filled" in timeseries.columns and other in timeseries.columns:
        if other in night_fits:    # the temperature choice fitted it on the central NEE
            try:
                other_reco = nighttime.apply_fit(
                    night_fits[other], nee_filled,
                    timeseries[f"{other}_filled"].to_numpy(dtype=float)).reco
            except FluxpartError:
                other_reco = None
        else:
            other_reco = refit(lambda *args, **kwargs: nighttime.partition_nighttime(
                *args, **kwargs).reco, other)
    if other_reco is not None and form is not None:
        # compared with the central Reco, which carries the respiration form's shift
        other_reco = other_reco + form.shift
    inputs = uncertainty.record_inputs(
        index, runs["central"], runs if len(runs) > 1 else {}, measured, noise, is_night,
        respiration_temperature(timeseries, temperature, delay, True,
                                damped=damped_delay(config)), night, day.parameters,
        gapfill_model, rref_window_days=config.rref_window_days, other_driver_reco=other_reco,
        nee_measured=nee_measured,
        fill_window_days=timeseries["nee_fill_window_days"].to_numpy(dtype=float),
        fill_noise_sigma=None if error_model is None else error_model.predict(
            timeseries["nee_filled"].to_numpy(dtype=float)), respiration_form=form,
        day_driver_statistic=None if day_evidence is None else day_evidence[0],
        day_evidence_critical=temperature_choice.DAYTIME_EVIDENCE_Z,
        fill_sides=sides, daytime_result=day, light_shape=shape,
        driver_day_prior=config.driver_day_prior,
        driver_share_spread=config.driver_share_spread, mixture_test=config.mixture_test,
        **event_cut(index, config))
    notes = []
    if (other_reco is not None and day_evidence is not None and inputs.driver_weight == 0.5
            and abs(day_evidence[0]) > temperature_choice.DAYTIME_EVIDENCE_Z):
        central = (f"{temperature} delayed by {delay * interval / 60:g} h"
                   + (" (its daily course damped)" if damped_delay(config) else "")
                   if delay else temperature)
        notes.append(temperature_choice.conflict_note(central, day_evidence[1],
                                                      day_evidence[0]))
    # a set mixture_test that changed nothing says so, as daytime_temperature's (review97)
    unchanged = driver_mixture.unchanged_note(
        config.mixture_test, [judged for judged in (inputs.mixture_judged, day_mixture)
                              if judged is not None],
        config.driver_day_prior in ("mixture", "share")
        or config.daytime_temperature == "mixture")
    if unchanged:
        notes.append(unchanged)
    percentiles = config.ustar_scenarios
    tables = []
    for table, keys in ((daily, index.normalize()),
                        (monthly, index.to_period("M").to_timestamp())):
        parts = uncertainty.period_uncertainty(inputs, keys, interval,
                                               ustar_percentiles=percentiles)
        sigmas = [c for c in parts.columns if c.endswith("_sigma")]
        tables.append(table.join(parts[sigmas].reindex(table.index)))
    parts = uncertainty.period_uncertainty(inputs, year_keys, interval,
                                           ustar_percentiles=percentiles)
    random = uncertainty.monte_carlo_sums(noise, index, interval,
                                          draws=config.random_error_draws, seed=config.seed,
                                          year_keys=year_keys)
    annual = annual.join(uncertainty.uncertainty_budget(annual, random, parts))
    notes.extend(gap_sides.state_change_notes(index, nee_filled, *sides, interval,
                                              annual["nee_uncertainty_gapfill"], year_keys))
    return tables[0], tables[1], annual, gapfill_model, notes


def measured_in_range(timeseries: pd.DataFrame, driver: str) -> np.ndarray:
    """A driver's measured values, NaN where screening found them outside its range.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The central run's record: ``<driver>`` as read and ``<driver>_out_of_range``
        (:func:`fluxpart.screening.range_flags`).
    driver : str
        ``"tair"`` or ``"tsoil"``.

    Returns
    -------
    numpy.ndarray
        The values [°C]. A missing code left undeclared (-7999 in a soil temperature)
        is no measurement, as screening holds; the other temperature's refit on it
        failed and the temperature part of the uncertainty was NaN without a word
        (round layouts35).

    References
    ----------
    Plausible ranges: :mod:`fluxpart.variables` (each with its source).
    """
    values = timeseries[driver].to_numpy(dtype=float)
    flag = f"{driver}_out_of_range"
    if flag in timeseries.columns:
        values = np.where(timeseries[flag].to_numpy(dtype=bool), np.nan, values)
    return values


def scenario_spread(annual, outcomes, index, interval, year_keys) -> pd.DataFrame:
    """Budget-year sums of each u* scenario and their spread (max - min) [g C m-2].

    Parameters
    ----------
    annual : pandas.DataFrame
        The annual table, by budget year.
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        Every u* run.
    index : pandas.DatetimeIndex
        The record's stamps.
    interval : int
        Record interval [minutes].
    year_keys : numpy.ndarray
        Budget year of each record.

    Returns
    -------
    pandas.DataFrame
        `annual` with ``<flux>_<run>`` sums and ``<flux>_ustar_spread`` (unchanged
        where only the central run exists).

    References
    ----------
    Papale, D. et al. (2006), see the module.
    """
    if len(outcomes) == 1:
        return annual
    sums = {}
    for name, (_, _, filled, night, day, _) in outcomes.items():
        per_record = pd.DataFrame({"nee": filled["value"].to_numpy(),
                                   "gpp_nighttime": night.gpp, "reco_nighttime": night.reco,
                                   "gpp_daytime": day.gpp, "reco_daytime": day.reco},
                                  index=index)
        carbon = per_record * float(budget.flux_to_carbon(1.0, interval))
        sums[name] = carbon.groupby(year_keys).sum(min_count=1).reindex(annual.index)
    out = annual.copy()
    for flux in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        table = np.stack([s[flux].to_numpy() for s in sums.values()], axis=1)   # years x runs
        for name, column in zip(sums, table.T, strict=True):
            if name != "central":
                out[f"{flux}_{name}"] = column
        # the range over the runs a year has (NaN-skipping, as DataFrame.max and min)
        out[f"{flux}_ustar_spread"] = np.fmax.reduce(table, axis=1) - np.fmin.reduce(table, axis=1)
    return out


class UncertaintyStage(NamedTuple):
    """The tables with their uncertainty, and the models behind it.

    Attributes
    ----------
    timeseries : pandas.DataFrame
        The per-record table with ``nee_random_error`` [µmol m-2 s-1].
    daily, monthly, annual : pandas.DataFrame
        With 1-sigma columns; the annual table with the uncertainty budget, the 95 %
        interval and t CO2 ha-1; a method that could not fit blank.
    parameters : dict of str to pandas.DataFrame
        ``random_error_model`` and ``random_error_bins`` (where estimated) and
        ``gapfill_error_model``.
    unfitted : list of str
        The partitioning methods that could not fit.
    warnings : list of str
        A random error not estimated, then the notes of :func:`budget_uncertainty`.
    """

    timeseries: pd.DataFrame
    daily: pd.DataFrame
    monthly: pd.DataFrame
    annual: pd.DataFrame
    parameters: dict
    unfitted: list
    warnings: list


def uncertainty_stage(timeseries, budgets, central, inputs, driver, interval, config,
                      year_keys) -> UncertaintyStage:
    """The random error of NEE and every part of the budgets' uncertainty.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The per-record table (:func:`fluxpart.result_tables.timeseries_table`).
    budgets : fluxpart.result_tables.BudgetTables
        The daily, monthly and annual sums.
    central : fluxpart.central_run.CentralStage
        Every u* run (shifted by the respiration form), the form and the daytime
        evidence on the respiration temperature.
    inputs : fluxpart.ustar_runs.RunInputs
        The fill's conditions and the night mask.
    driver : fluxpart.respiration_driver.DriverDecision
        The respiration temperature, its delay and the choice's nighttime fits.
    interval : int
        Record interval [minutes].
    config : Config
        Settings.
    year_keys : numpy.ndarray
        Budget year of each record.

    Returns
    -------
    UncertaintyStage

    References
    ----------
    Richardson, A. D. et al. (2006), see the module.
    """
    parameters, warnings = {}, []
    try:
        sigma, error_model = uncertainty.timeseries_random_error(
            timeseries, rg_tolerance=config.random_error_rg_tolerance,
            tair_tolerance=config.random_error_tair_tolerance,
            vpd_tolerance=config.random_error_vpd_tolerance)
        parameters["random_error_model"] = error_model.table()
        parameters["random_error_bins"] = error_model.bins
    except InsufficientDataError as error:
        sigma, error_model = np.full(len(timeseries), np.nan), None
        warnings.append(f"random error of NEE not estimated: {error}")
    timeseries = timeseries.assign(nee_random_error=sigma)
    night, day = central.outcomes["central"].night, central.outcomes["central"].day
    daily, monthly, annual, gapfill_model, driver_notes = budget_uncertainty(
        budgets.daily, budgets.monthly, budgets.annual, timeseries, central.outcomes, sigma,
        inputs.conditions, inputs.is_night, night, day, driver.temperature, interval, config,
        year_keys, driver.night_fits, error_model, central.form, driver.delay,
        central.day_evidence, inputs.sun_up, central.shape, central.mixture)
    warnings.extend(driver_notes)
    parameters["gapfill_error_model"] = gapfill_model
    # a method that could not fit has no sums, so no uncertainty of them either
    unfitted = method_failure.failed_methods(night, day)
    daily, monthly, annual = (method_failure.blank(table, unfitted)
                              for table in (daily, monthly, annual))
    annual = annual.join(uncertainty.carbon_accounting_units(annual))
    return UncertaintyStage(timeseries, daily, monthly, annual, parameters, unfitted, warnings)
