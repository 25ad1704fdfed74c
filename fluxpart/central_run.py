"""What follows the u* runs on the central run: the respiration form, the light shape,
the daytime evidence.

The nighttime Reco refitted with a constant Q10 and averaged with the Lloyd–Taylor
Reco by their BIC weight (:mod:`fluxpart.partition.respiration_form`), the same shift
added to every u* run (:func:`shifted`); with ``daytime_curvature = "average"`` the
daytime method refitted once with a profiled light-response curvature and averaged
with the rectangular fit (:func:`averaged_shape`,
:mod:`fluxpart.partition.light_shape`), the same shift added to every u* run; the
daytime method refitted on the other
respiration temperature as evidence on the choice
(:func:`fluxpart.partition.temperature_choice.daytime_evidence`); the text naming the
E0 daytime windows without their own took.

References
----------
Lloyd, J. and Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8, 315-323.
Lasslop, G. et al. (2010). Separation of net ecosystem exchange into assimilation
and respiration using a light response curve approach. Global Change Biology 16,
187-208.
"""

from __future__ import annotations

import dataclasses
from typing import NamedTuple

import numpy as np

from . import daytime_temperature, driver_mixture, gapfill, method_failure, uncertainty
from .errors import FluxpartError, InsufficientDataError
from .method_settings import (
    OTHER_TEMPERATURE,
    damped_delay,
    nighttime_settings,
    respiration_temperature,
)
from .partition import light_shape, nighttime, pieces, respiration_form, temperature_choice
from .ustar_runs import fit_daytime


def averaged_form(frame, filled_drivers, central, is_night, temperature, config, delay=0,
                  sun_up=None):
    """Both respiration forms' nighttime Reco on the central run, averaged as configured.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record (measured temperature, ``rg`` [W m-2]).
    filled_drivers : pandas.DataFrame
        The filled drivers (the filled respiration temperature [°C]).
    central : fluxpart.ustar_runs.RunOutcome
        The central u* run.
    is_night : numpy.ndarray of bool
        The night mask.
    temperature : str
        The respiration temperature.
    config : Config
        Settings (``respiration_form``).
    delay : int, optional
        Records by which the respiration temperature is delayed.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in each record (``night_fit_records = "sun_down"``).

    Returns
    -------
    fluxpart.partition.respiration_form.FormAverage
        The forms' weights and the per-record shift of Reco [µmol m-2 s-1].

    References
    ----------
    Lloyd, J. and Taylor, J. A. (1994), see the module.
    """
    nee_measured, filled, night = central.nee_measured, central.filled, central.night
    try:
        if method_failure.failed(night):
            raise InsufficientDataError("the nighttime method could not fit")
        exponential = respiration_form.exponential_reco(
            frame.index, nee_measured, filled["value"].to_numpy(dtype=float),
            respiration_temperature(frame, temperature, delay, damped=damped_delay(config)),
            respiration_temperature(filled_drivers, temperature, delay, True,
                                    damped=damped_delay(config)), is_night,
            respiration_driver=temperature,
            **nighttime_settings(config, frame["rg"].to_numpy(dtype=float), frame.index,
                                 method_failure.borrowed_e0(night), sun_up))
    except FluxpartError:
        exponential = None
    weight = 0.0 if exponential is None else uncertainty.driver_weight(
        nee_measured, is_night, night.reco, exponential)
    return respiration_form.average_forms(night.reco, exponential, weight,
                                          config.respiration_form)


def averaged_shape(frame, screened, filled_drivers, central, is_night, temperature, delay,
                   config):
    """The daytime method's two light-response shapes on the central run, or None.

    With ``daytime_curvature = "average"`` the central run's rectangular daytime fit is
    refitted with the curvature profiled on the record, once
    (:mod:`fluxpart.partition.light_shape`).

    Parameters
    ----------
    frame, screened, filled_drivers, central, is_night, temperature, delay, config
        As :func:`daytime_driver_evidence` (`central` the rectangular central run;
        ``config.daytime_curvature``).

    Returns
    -------
    shape : fluxpart.partition.light_shape.ShapeAverage or None
        None with another setting, or where a method failed or the profiled fit
        cannot be made (the daytime fluxes then stay rectangular, without the part).
    note : str
        Where the setting asked for the average and the profiled fit could not be made:
        a warning saying so and why (review55: the run fell back to the rectangular
        shape without a word); '' otherwise.

    References
    ----------
    Lasslop, G. et al. (2010), see the module.
    """
    nee_measured, night, day = central.nee_measured, central.night, central.day
    if (config.daytime_curvature != light_shape.AVERAGE or method_failure.failed(day)
            or method_failure.failed(night)):
        return None, ""
    try:
        profiled = fit_daytime(frame, nee_measured, screened, filled_drivers,
                               respiration_temperature(filled_drivers, temperature, delay, True,
                                                       damped=damped_delay(config)),
                               is_night, config, "fit", night)
    except FluxpartError as error:
        return None, light_shape.not_averaged(error)
    return light_shape.average_shapes(day, profiled), ""


def shifted(night, shift):
    """A nighttime result with `shift` added to its Reco and GPP.

    Parameters
    ----------
    night : fluxpart.partition.nighttime.NighttimeResult
        A run's nighttime partitioning.
    shift : numpy.ndarray or float
        The respiration form's shift of each record [µmol m-2 s-1].

    Returns
    -------
    fluxpart.partition.nighttime.NighttimeResult
        `night` itself where the shift is 0 everywhere, else a copy with ``reco`` and
        ``gpp`` shifted [µmol m-2 s-1].
    """
    if not np.any(shift):
        return night
    return dataclasses.replace(night, reco=night.reco + shift, gpp=night.gpp + shift)


def daytime_driver_evidence(frame, screened, filled_drivers, central, is_night, temperature,
                            delay, config):
    """The daytime records' evidence on the respiration temperature, or None.

    The daytime method fitted again with the other temperature (undelayed air
    temperature for a delayed one) and the central run's light-response curvature.

    Parameters
    ----------
    frame, screened : pandas.DataFrame
        The prepared and the screened record.
    filled_drivers : pandas.DataFrame
        The filled drivers.
    central : fluxpart.ustar_runs.RunOutcome
        The central u* run.
    is_night : numpy.ndarray of bool
        The night mask.
    temperature : str
        The run's respiration temperature.
    delay : int
        Records by which it is delayed.
    config : Config
        Settings.

    Returns
    -------
    tuple or None
        (:func:`temperature_choice.daytime_evidence`, the other temperature's name, the
        daytime partitioning on it); None where a method failed or the other temperature
        is missing.

    References
    ----------
    Lasslop, G. et al. (2010), see the module.
    """
    nee_measured, night, day = central.nee_measured, central.night, central.day
    if method_failure.failed(day) or method_failure.failed(night):
        return None
    other = "tair" if delay else OTHER_TEMPERATURE[temperature]
    if f"{other}_filled" not in filled_drivers.columns:
        return None
    other_filled = respiration_temperature(filled_drivers, other, 0, True)
    if not np.isfinite(other_filled).any():
        return None
    try:
        other_day = fit_daytime(frame, nee_measured, screened, filled_drivers, other_filled,
                                is_night, config, float(day.parameters["curvature"].iloc[0]),
                                night)
    except FluxpartError:
        return None
    statistic = temperature_choice.daytime_evidence(
        nee_measured, ~np.asarray(is_night, dtype=bool), day.reco - day.gpp,
        other_day.reco - other_day.gpp, frame.index.normalize())
    return statistic, other, other_day


def night_mixture(inputs, outcomes, driver, form, config) -> tuple | None:
    """The air share of the nights' mixture of soil and air temperature and its draws, for
    ``daytime_temperature = "mixture"``; None where not tested.

    Parameters
    ----------
    inputs : fluxpart.ustar_runs.RunInputs
        The record, screened, with its filled drivers.
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        The u* runs, the respiration form's shift added.
    driver : fluxpart.respiration_driver.DriverDecision
        The respiration temperature and the choice's nighttime fits.
    form : fluxpart.partition.respiration_form.FormAverage
        The respiration forms' average (its shift added to the air-driven night Reco, as
        the central Reco carries it and as the uncertainty compares them).
    config : Config
        Settings.

    Returns
    -------
    tuple or None
        (share, unclipped draws) of :func:`fluxpart.daytime_temperature.night_share` on
        the choice's air-temperature night fit applied to the central fill, which
        :func:`fluxpart.driver_mixture.mixture_shown` tests at the ``mixture_test``
        setting's critical value, as the temperature part of the
        uncertainty tests it (:func:`fluxpart.uncertainty_assembly.budget_uncertainty`);
        None for another setting, a run on air temperature, or where the choice fitted
        no air temperature (a driver set by hand) or the nighttime method failed.
    """
    if config.daytime_temperature != daytime_temperature.MIXTURE \
            or driver.temperature != "tsoil" or driver.delay:
        return None
    central = outcomes["central"]
    fit = driver.night_fits.get("tair")
    if fit is None or method_failure.failed(central.night) \
            or "tair_filled" not in inputs.filled_drivers.columns:
        return None
    try:
        air_reco = nighttime.apply_fit(
            fit, central.filled["value"].to_numpy(dtype=float),
            inputs.filled_drivers["tair_filled"].to_numpy(dtype=float)).reco
    except FluxpartError:
        return None
    if form is not None:
        air_reco = air_reco + form.shift
    return daytime_temperature.night_share(central.nee_measured, inputs.is_night,
                                           central.night.reco, air_reco, inputs.frame.index)


def fallback_e0_text(parameters, fell_back, e0_annual) -> str:
    """The E0 the daytime windows without their own took, as a warning's words.

    Parameters
    ----------
    parameters : pandas.DataFrame
        The daytime window table (``e0`` [K]).
    fell_back : pandas.Series of bool
        The windows that took the nighttime method's E0 (:func:`fluxpart.ustar_runs.
        fit_daytime`: the median of its per-record E0).
    e0_annual : pandas.DataFrame
        The nighttime method's E0 per calendar year (``e0`` [K]).

    Returns
    -------
    str
        The E0 [K], named with each calendar year's where the record has several (the
        median of a record's records can be a value no year has).
    """
    value = float(parameters.loc[fell_back.to_numpy(), "e0"].iloc[0])
    years = e0_annual.dropna(subset=["e0"]) if "e0" in getattr(e0_annual, "columns", ()) \
        else None
    if years is None or len(years) < 2:
        return f"the nighttime method's E0 ({value:.0f} K)"
    listed = ", ".join(f"{int(year)}: {float(e0):.0f} K"
                       for year, e0 in years["e0"].items())
    return (f"the median over the record of the nighttime method's E0 ({value:.0f} K; "
            f"calendar years {listed})")


class CentralStage(NamedTuple):
    """The u* runs with the respiration form's shift, and the central run's evidence.

    Attributes
    ----------
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        Every run, its nighttime Reco and GPP shifted by the respiration form's average.
    form : fluxpart.partition.respiration_form.FormAverage
        The two respiration forms' weights and the per-record shift [µmol m-2 s-1].
    day_evidence : tuple or None
        (statistic, other temperature's name, the daytime partitioning on it) of
        :func:`daytime_driver_evidence`.
    warnings : list of str
        Events a fill crossed, pieces without a window of their own, a set
        ``daytime_temperature`` that changed nothing, the daytime E0 fallback, in this
        order.
    night_light : list of dict
        The central fill's yearly tests of night NEE on the preceding day's light
        (:func:`fluxpart.preceding_light.test_records`; empty where not tested).
    shape : fluxpart.partition.light_shape.ShapeAverage or None
        The daytime light-response shapes' average and spread
        (``daytime_curvature = "average"``); None otherwise.
    mixture : tuple or None
        (share, unclipped draws) of the nights' test for ``daytime_temperature =
        "mixture"`` (:func:`night_mixture`); None where not tested.
    """

    outcomes: dict
    form: object
    day_evidence: object
    warnings: list
    night_light: list = []
    shape: object = None
    mixture: object = None


def follow_ups(inputs, outcomes, driver, config) -> CentralStage:
    """The respiration form (and the light shape) averaged into every run, and the central
    run's checks.

    Parameters
    ----------
    inputs : fluxpart.ustar_runs.RunInputs
        The record, screened as the runs were (after the storage check), with its
        filled drivers.
    outcomes : dict of str to fluxpart.ustar_runs.RunOutcome
        The u* runs.
    driver : fluxpart.respiration_driver.DriverDecision
        The respiration temperature and its delay.
    config : Config
        Settings.

    Returns
    -------
    CentralStage

    References
    ----------
    Lloyd, J. and Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8, 315-323.
    """
    frame, screened, filled_drivers, _, is_night = inputs[:5]
    temperature, delay = driver.temperature, driver.delay
    # the nighttime method's central Reco averaged over the two respiration forms; the
    # same per-record shift in every u* run keeps their spread the threshold's alone
    form = averaged_form(frame, filled_drivers, outcomes["central"], is_night, temperature,
                         config, delay, inputs.sun_up)
    outcomes = {name: outcome._replace(night=shifted(outcome.night, form.shift))
                for name, outcome in outcomes.items()}
    # the daytime method's two light-response shapes, profiled once on the central run;
    # the same per-record shift in every u* run, as the respiration form's
    rectangular = outcomes["central"]
    shape, shape_note = averaged_shape(frame, screened, filled_drivers, rectangular,
                                       is_night, temperature, delay, config)
    if shape is not None:
        outcomes = {name: outcome._replace(day=shape.shifted(outcome.day))
                    if not method_failure.failed(outcome.day) else outcome
                    for name, outcome in outcomes.items()}
    filled, night, day = (outcomes["central"].filled, outcomes["central"].night,
                          outcomes["central"].day)
    warnings = list(gapfill.crossed_event_notes(frame.index, config.events,
                                                filled.attrs.pop("events_crossed", [])))
    if shape_note:
        warnings.append(shape_note)
    if config.events:
        warnings.extend(pieces.window_notes(frame.index, gapfill.event_breaks(
            frame.index, config.events), night.rref_windows, day.parameters))
    # the evidence compares two fits of one shape: the rectangular central run's
    day_evidence = daytime_driver_evidence(frame, screened, filled_drivers, rectangular,
                                           is_night, temperature, delay, config)
    fitted = day_evidence is not None and not delay
    mixture = night_mixture(inputs, outcomes, driver, form, config) if fitted else None
    shown = None if mixture is None else driver_mixture.mixture_shown(
        *mixture, driver_mixture.critical_value(config.mixture_test))
    weight = daytime_temperature.air_weight(config.daytime_temperature, temperature,
                                            shown) if fitted else 0.0
    # a set daytime_temperature that changed nothing says so (review89: it was silent)
    unchanged = daytime_temperature.unchanged_note(config.daytime_temperature, temperature,
                                                   fitted, shown)
    if unchanged:
        warnings.append(unchanged)
    if weight:
        # the daytime method on air temperature (Lasslop et al. 2010), or the average of
        # both: the evidence's own fit, every u* run shifted as the central one
        central_day = outcomes["central"].day
        air_day = day_evidence[2] if shape is None else shape.shifted(day_evidence[2])
        outcomes = {name: outcome._replace(day=daytime_temperature.shifted_day(
                        outcome.day, central_day, air_day, weight))
                    if not method_failure.failed(outcome.day) else outcome
                    for name, outcome in outcomes.items()}
        filled, night, day = (outcomes["central"].filled, outcomes["central"].night,
                              outcomes["central"].day)
    fell_back = day.parameters["e0_source"] == "fallback"
    if config.e0_fallback is None and fell_back.any():
        warnings.append(
            f"daytime partitioning: the night data gave no acceptable E0 on {temperature} in "
            f"{int(fell_back.sum())} of {len(fell_back)} windows (pooled over the year from "
            f"windows of at least {config.e0_min_points} night records spanning "
            f"{config.e0_min_temperature_range} K within "
            f"{max(config.daytime_e0_window_days)} days); "
            f"{fallback_e0_text(day.parameters, fell_back, night.e0_annual)} was used there, "
            "flagged 'fallback' in the daytime parameter table, so the two methods are not "
            "independent in their E0")
    return CentralStage(outcomes, form, day_evidence, warnings,
                        filled.attrs.pop("night_light_tests", []), shape, mixture)
