"""Gap filling and both partitionings at the thresholds of each u* run.

The central run (the detected threshold) first, then each u* scenario (the bootstrap
percentiles, the seasons' and the year's thresholds), one after another; each run is
a :class:`RunOutcome`. Where the mornings after calm nights show a release of stored
CO2 (:mod:`fluxpart.storage_check`), :func:`storage_release` excludes them and the
runs are redone.

References
----------
Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439.
Lasslop, G. et al. (2010). Separation of net ecosystem exchange into assimilation
and respiration using a light response curve approach. Global Change Biology 16,
187-208.
"""

from __future__ import annotations

import dataclasses
from typing import NamedTuple

import numpy as np
import pandas as pd

from . import (
    e0_evidence,
    gapfill,
    method_failure,
    night_donors,
    night_uptake,
    preceding_light,
    screening,
    screening_stage,
    storage_check,
    uncertainty,
)
from .errors import InsufficientDataError
from .method_settings import (
    damped_delay,
    event_cut,
    fill_nee,
    night_light_tested,
    nighttime_settings,
    respiration_temperature,
)
from .partition import daytime, light_shape, nighttime


class RunInputs(NamedTuple):
    """What every u* run fills and partitions (:func:`fill_and_partition`'s first arguments).

    Attributes
    ----------
    frame : pandas.DataFrame
        The prepared record.
    screened : pandas.DataFrame
        The screened record (NEE of excluded mornings NaN after :func:`storage_release`).
    filled_drivers : pandas.DataFrame
        The gap-filled drivers (``rg_filled`` [W m-2], ``tair_filled`` [°C], ...).
    conditions : pandas.DataFrame
        The drivers the NEE fill compares (:func:`fluxpart.gapfill.driver_conditions`).
    is_night : numpy.ndarray of bool
        The night mask.
    sun_up : numpy.ndarray of bool or None
        The sun above the horizon in the record (potential radiation above 0): night
        gaps in darkness take dark donors first (:func:`fluxpart.gapfill.fill_marginal`).
    """

    frame: pd.DataFrame
    screened: pd.DataFrame
    filled_drivers: pd.DataFrame
    conditions: pd.DataFrame
    is_night: np.ndarray
    sun_up: np.ndarray | None = None


def run_inputs(frame, screened, is_night, potential_radiation, config) -> RunInputs:
    """Fill the drivers and set the conditions the NEE fill compares.

    Parameters
    ----------
    frame, screened : pandas.DataFrame
        The prepared and the screened record.
    is_night : numpy.ndarray of bool
        The night mask.
    potential_radiation : numpy.ndarray
        Potential (top-of-atmosphere) radiation [W m-2], for the clearness index.
    config : Config
        Settings.

    Returns
    -------
    RunInputs

    References
    ----------
    Reichstein, M. et al. (2005), Appendix A (marginal distribution sampling).
    """
    filled_drivers = gapfill.fill_drivers(
        screened, rg_tolerance=config.rg_tolerance, max_window_days=config.gapfill_max_window_days,
        interpolation_hours=config.gapfill_interpolation_hours)
    conditions = gapfill.driver_conditions(filled_drivers, soil=True)
    if config.gapfill_clearness_tolerance > 0:
        conditions["clearness"] = gapfill.clearness_index(
            conditions["rg"].to_numpy(), potential_radiation)
    if night_light_tested(config):
        step = (screened.index[1] - screened.index[0]) if len(screened.index) > 1 else None
        per_day = 1 if step is None else int(round(pd.Timedelta(days=1) / step))
        conditions[preceding_light.COLUMN] = preceding_light.preceding_day_rg(
            conditions["rg"].to_numpy(), per_day)
    # the sun above the horizon for part of the record, as solar.night_mask's epsilon
    sun_up = np.asarray(potential_radiation, dtype=np.float64) > 1e-6
    return RunInputs(frame, screened, filled_drivers, conditions, is_night, sun_up)


class RunOutcome(NamedTuple):
    """What one u* run hands on: its u* filter, measured and filled NEE and both methods.

    Attributes
    ----------
    too_calm : numpy.ndarray of bool
        Night records below the run's u* threshold.
    nee_measured : numpy.ndarray
        NEE after screening and the u* filter [µmol m-2 s-1] (NaN where rejected).
    filled : pandas.DataFrame
        The NEE fill (:func:`fluxpart.gapfill.fill_marginal`): ``value`` and its
        quality, method and window columns.
    night : fluxpart.partition.nighttime.NighttimeResult
        The nighttime method's result (NaN where it could not fit).
    day : fluxpart.partition.daytime.DaytimeResult
        The daytime method's result (NaN where it could not fit).
    withheld : numpy.ndarray of bool or None
        Night records measured but no donor for a night gap
        (:func:`fluxpart.night_donors.withheld_donors`); None: none withheld.
    """

    too_calm: np.ndarray
    nee_measured: np.ndarray
    filled: pd.DataFrame
    night: object
    day: object
    withheld: np.ndarray | None = None


def fill_and_partition(frame, screened, filled_drivers, conditions, is_night, threshold,
                       temperature, config, curvature, night_fit=None, central_fill=None,
                       delay=0, skip=(), nearest_year=False, sun_up=None, donor_margin=None,
                       day_start=None):
    """Gap-fill NEE after the u* filter at `threshold` and partition it both ways.

    The central run lets one method that cannot fit be NaN and tries the nearest
    year's E0 only where the plain fit fails (:mod:`fluxpart.method_failure`).

    Parameters
    ----------
    frame, screened, filled_drivers, conditions, is_night
        The fields of :class:`RunInputs`, in its order.
    threshold : numpy.ndarray
        The run's u* threshold per record [m s-1].
    temperature : str
        The respiration temperature, ``"tair"`` or ``"tsoil"``.
    config : Config
        Settings.
    curvature : float or None
        The daytime light-response curvature to keep (a scenario's: the central
        run's), or None to fit it.
    night_fit : optional
        The temperature choice's nighttime fit on the same measured NEE and
        temperature, reused instead of fitting again.
    central_fill : pandas.DataFrame, optional
        The central run's NEE fill, whose day records a u* scenario shares.
    delay : int, optional
        Records by which the respiration temperature is delayed (the choice's).
    skip : tuple of str, optional
        Methods not fitted (NaN; those the central run could not fit).
    nearest_year : bool, optional
        The nighttime E0 of a year without one from the nearest year (the central
        run's choice), for a u* scenario.
    sun_up : numpy.ndarray of bool, optional
        :attr:`RunInputs.sun_up` (dark donors for night gaps in darkness first; the
        nighttime fits' records with the sun down where ``night_fit_records =
        "sun_down"``).
    donor_margin : numpy.ndarray, optional
        The u* threshold's 1-sigma per record [m s-1]
        (:func:`fluxpart.night_donors.threshold_spread`): the night records kept
        between `threshold` and `threshold` + this stay measured but fill no night gap.
        None: every kept record is a donor.
    day_start : fluxpart.partition.daytime.DaytimeResult, optional
        The central run's daytime result, from whose window fits a u* scenario's
        daytime fits start (:func:`fluxpart.partition.daytime.partition_daytime`'s
        ``start``). None: from the starting values of the run's own data.

    Returns
    -------
    too_calm, nee_measured, filled, night, day, withheld
        The fields of a :class:`RunOutcome`.
    errors : dict of str to Exception
        The methods that could not fit and why.

    References
    ----------
    Reichstein, M. et al. (2005), see the module (nighttime, marginal distribution sampling).
    Lasslop, G. et al. (2010), see the module (daytime).
    Papale, D. et al. (2006). Biogeosciences 3, 571-583 (the threshold's bootstrap, the
    donors' margin: :mod:`fluxpart.night_donors`).
    """
    ustar = screened["ustar"].to_numpy()
    too_calm = screening.low_ustar(ustar, is_night, threshold)
    nee_measured = np.where(too_calm, np.nan, screened["nee"].to_numpy())
    # night records just above the threshold stay measured but fill no gap (night_donors)
    withheld = night_donors.withheld_donors(nee_measured, ustar, is_night, threshold,
                                           donor_margin)
    donors = night_donors.donor_values(nee_measured, withheld)
    missing = np.isnan(nee_measured)
    if central_fill is not None and config.gapfill_donors in ("separate_day_night",
                                                              "dark_first"):
        # the u* filter removes night records only, and day gaps take day donors only:
        # the day records of every u* scenario are those of the central fill
        night_fill = fill_nee(donors, conditions, frame.index, is_night, config,
                              gaps=is_night & missing, sun_up=sun_up)
        filled = pd.DataFrame({column: np.where(is_night, night_fill[column].to_numpy(),
                                                central_fill[column].to_numpy())
                               for column in night_fill.columns}, index=night_fill.index)
    else:
        filled = fill_nee(donors, conditions, frame.index, is_night, config,
                          gaps=missing, sun_up=sun_up)
    filled = night_donors.as_measured(filled, nee_measured, withheld)
    temperature_filled = respiration_temperature(filled_drivers, temperature, delay, True,
                                                 damped=damped_delay(config))

    def fit_nighttime(borrow):
        if night_fit is not None:
            return nighttime.apply_fit(night_fit, filled["value"].to_numpy(), temperature_filled)
        return nighttime.partition_nighttime(
            frame.index, nee_measured, filled["value"].to_numpy(),
            respiration_temperature(screened, temperature, delay, damped=damped_delay(config)),
            temperature_filled,
            is_night, respiration_driver=temperature,
            **nighttime_settings(config, screened["rg"].to_numpy(dtype=float), frame.index,
                                 borrow, sun_up))

    central = central_fill is None
    night, day, errors = method_failure.partition_both(
        (lambda: method_failure.first_fit(fit_nighttime)) if central
        else (lambda: fit_nighttime(nearest_year)),
        lambda night: fit_daytime(frame, nee_measured, screened, filled_drivers,
                                  temperature_filled, is_night, config, curvature, night,
                                  start=day_start),
        len(frame), temperature, skip=skip, degrade=central)
    return too_calm, nee_measured, filled, night, day, withheld, errors


def fit_daytime(frame, nee_measured, screened, filled_drivers, temperature_filled, is_night,
                config, curvature, night, start=None):
    """The daytime method with the configured settings.

    Where no daytime night window has the temperature range for an E0 of its own, the
    median of the nighttime method's E0 stands in (flagged ``fallback``), unless
    ``e0_fallback`` is set.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record (its index).
    nee_measured : numpy.ndarray
        NEE after the u* filter [µmol m-2 s-1].
    screened : pandas.DataFrame
        The screened record (the random-error model's drivers).
    filled_drivers : pandas.DataFrame
        ``rg_filled`` [W m-2] and ``vpd_filled`` [hPa].
    temperature_filled : numpy.ndarray
        The filled respiration temperature [°C].
    is_night : numpy.ndarray of bool
        The night mask.
    config : Config
        Settings.
    curvature : float or None
        The light-response curvature to keep, or None to fit it.
    night : fluxpart.partition.nighttime.NighttimeResult
        The nighttime result (its E0 [K] for the fallback).
    start : fluxpart.partition.daytime.DaytimeResult, optional
        Another run's daytime result to start the window fits from
        (:func:`fluxpart.partition.daytime.partition_daytime`).

    Returns
    -------
    fluxpart.partition.daytime.DaytimeResult

    References
    ----------
    Lasslop, G. et al. (2010), see the module.
    """
    # the daytime method estimates E0 from its own night windows; where none has the
    # temperature range for it (e.g. a damped soil temperature), the nighttime method's
    # E0 stands in, flagged "fallback" in the daytime parameter table and warned about
    day_e0_fallback = config.e0_fallback
    if day_e0_fallback is None and np.isfinite(night.e0).any():
        day_e0_fallback = float(np.nanmedian(night.e0))
    return daytime.partition_daytime(
        frame.index, nee_measured, filled_drivers["rg_filled"].to_numpy(),
        filled_drivers["vpd_filled"].to_numpy(), temperature_filled, is_night,
        random_error=daytime_error_model(frame.index, nee_measured, screened, config),
        window_days=config.daytime_window_days, window_step_days=config.daytime_window_step_days,
        min_points=config.daytime_min_points, k_min_points=config.daytime_k_min_points,
        beta0_max=config.daytime_beta0_max, e0_window_days=config.daytime_e0_window_days,
        e0_min_points=config.e0_min_points,
        e0_min_temperature_range=config.e0_min_temperature_range, e0_bounds=config.e0_bounds,
        e0_max_relative_error=config.e0_max_relative_error, e0_fallback=day_e0_fallback,
        night_min_points=config.daytime_night_min_points,
        consistency_z=config.daytime_consistency_z,
        rref_max_relative_error=config.daytime_rref_max_relative_error,
        night_in_fit=config.daytime_night_in_fit,
        curvature=curvature, start=start, **event_cut(frame.index, config))


def daytime_error_model(index, nee_measured, screened, config):
    """σ(NEE) of the random-error model for weighting the daytime fit, or None (unweighted).

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The record's stamps.
    nee_measured : numpy.ndarray
        NEE after the u* filter [µmol m-2 s-1].
    screened : pandas.DataFrame
        ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa] of the paired records.
    config : Config
        Settings (``daytime_weighting``, the pairs' tolerances).

    Returns
    -------
    callable or None
        σ [µmol m-2 s-1] of an NEE value; None where not weighted or too few pairs.

    References
    ----------
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136, 1-18.
    """
    if config.daytime_weighting == "none":
        return None
    try:
        pairs = uncertainty.paired_differences(
            index, nee_measured, screened["rg"].to_numpy(dtype=float),
            screened["tair"].to_numpy(dtype=float), screened["vpd"].to_numpy(dtype=float),
            rg_tolerance=config.random_error_rg_tolerance,
            tair_tolerance=config.random_error_tair_tolerance,
            vpd_tolerance=config.random_error_vpd_tolerance)
        return uncertainty.random_error_model(pairs).predict
    except InsufficientDataError:
        return None


def threshold_runs(arguments, runs, temperature, config, night_fit, delay, warnings, step,
                   year_keys=()):
    """Fill and partition at each u* run's thresholds; the outcomes by run name.

    The central run comes first (it may reuse `night_fit`, the temperature choice's
    nighttime fit on the same measured NEE); the scenarios share its NEE fill of the
    day records and its light-response curvature, and start their daytime window fits
    from its fits (round speed56: in fewer iterations, to within the fits' convergence
    tolerance of the fits from their own data's starting values). A scenario with too
    little data is left out with a warning appended to `warnings`. A method the central
    run could not fit is NaN in every run, named in `warnings` with the budget years
    `year_keys`.

    Parameters
    ----------
    arguments : RunInputs
        The record, screened, with its filled drivers.
    runs : dict of str to numpy.ndarray
        Each run's u* threshold per record [m s-1], ``"central"`` first.
    temperature : str
        The respiration temperature.
    config : Config
        Settings.
    night_fit : optional
        The temperature choice's nighttime fit (the central run's).
    delay : int
        Records by which the respiration temperature is delayed.
    warnings : list of str
        Appended to.
    step : callable
        Progress, called after each run ``stage_count`` foresees.
    year_keys : numpy.ndarray, optional
        Budget year of each record.

    Returns
    -------
    dict of str to RunOutcome

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
    Exchange measured with eddy covariance technique. Biogeosciences 3, 571-583
    (the u* threshold's bootstrap percentiles as scenarios).
    """
    outcomes = {}
    # "average": the runs fit the rectangular shape; the profiled one is fitted once, on
    # the central run (fluxpart.central_run.averaged_shape)
    curvature = light_shape.central_curvature(config.daytime_curvature)
    skip, borrowed, day_start = (), False, None
    # one margin for every run: the threshold's own spread (night_donors)
    margin = night_donors.threshold_spread(runs, config.night_donor_margin)
    for name, threshold in runs.items():
        try:
            *outcome, errors = fill_and_partition(
                *arguments[:5], threshold, temperature, config, curvature,
                night_fit if name == "central" else None,
                None if name == "central" else outcomes["central"][2], delay, skip, borrowed,
                sun_up=arguments.sun_up, donor_margin=margin, day_start=day_start)
            outcomes[name] = (RunOutcome(*outcome) if name == "central"
                              else _scenario_outcome(RunOutcome(*outcome)))
            if name == "central":
                skip = tuple(errors)
                borrowed = method_failure.borrowed_e0(outcome[3])
                warnings.extend(nighttime.nearest_year_notes(outcome[3].e0_annual, temperature))
                warnings.extend(e0_evidence.thin_e0_notes(
                    outcome[3].e0_annual, outcome[3].e0_windows, temperature,
                    e0_best_windows=config.e0_best_windows,
                    e0_min_temperature_range=config.e0_min_temperature_range))
                warnings.extend(method_failure.failure_warning(method, np.unique(year_keys),
                                                               error)
                                for method, error in errors.items())
            if name == "central" and "daytime" not in skip:
                # the u* scenarios keep the central run's light-response curvature, so
                # that their spread is the u* threshold's alone
                day_parameters = outcomes["central"][4].parameters
                curvature = float(day_parameters["curvature"].iloc[0])
                # and start their window fits from its fits: the same day records, some
                # night records fewer or more (round speed56, issue 17)
                day_start = outcomes["central"][4]
        except InsufficientDataError as error:
            if name == "central":
                raise
            # a higher u* threshold can leave too few night records for a method: that
            # scenario is left out of the u* part (computed from the runs that remain)
            warnings.append(f"u* scenario {name} not computed ({error}); the u* part of the "
                            "uncertainty uses the remaining runs")
        if name not in ("ustar_seasonal", "ustar_year"):     # runs stage_count cannot foresee
            step(_step_label(name))
    return outcomes


def _scenario_outcome(outcome: RunOutcome) -> RunOutcome:
    """A u* scenario's outcome with what the stages after the runs read of it alone.

    The uncertainty reads a scenario's filled NEE ``value`` and both methods' GPP and
    Reco (:func:`fluxpart.uncertainty_assembly.scenario_spread`); the fill's quality,
    method and window columns and the daytime result's GPP beside each gap
    (``gpp_before``, ``gpp_after``, ``span_days``, ``stretch``: the central run's gap
    sides) are let go as each scenario ends, not kept to the end of the run (10.2 MB
    per scenario on ten half-hourly years: 4.6 MB of fill columns, 5.6 MB of arrays;
    round speed54), and so are its window fits (``fits``: the central run's alone are
    the scenarios' starting point). The value column is copied, so no block of the
    fill's other columns stays alive behind it.
    """
    filled = pd.DataFrame({"value": outcome.filled["value"].to_numpy(copy=True)},
                          index=outcome.filled.index)
    filled.attrs = dict(outcome.filled.attrs)
    day = outcome.day
    if getattr(day, "gpp_before", None) is not None:
        day = dataclasses.replace(day, gpp_before=None, gpp_after=None, span_days=None,
                                  stretch=None, fits=None)
    return outcome._replace(filled=filled, day=day)


def _step_label(name: str) -> str:
    """The progress line's name of one run: "ustar_p16" read as code to a user (review46)."""
    if name.startswith("ustar_p") and name[len("ustar_p"):].isdigit():
        return ("gap filling and partitioning (u* threshold at its bootstrap percentile "
                f"{name[len('ustar_p'):]})")
    if name == "central":
        return "gap filling and partitioning (central run)"
    return f"gap filling and partitioning ({name})"


def storage_release(outcomes, run_warnings, screened, rerun, ustar, threshold, is_night,
                    year_keys, interval, mode):
    """Exclude the mornings after calm nights where their release of stored CO2 shows.

    Stage by stage (:data:`fluxpart.storage_check.CALM_SHARES`: the nights at least half
    calm, then, in the years that stage flagged, the nights with any calm record), the
    mornings after such nights are compared with the others
    (:func:`fluxpart.storage_check.morning_release`); where the excess is flagged and
    `mode` is ``"exclude"``, they are excluded from the measured NEE and ``rerun(screened)``
    redoes the u* runs (returning their outcomes and warnings).

    Parameters
    ----------
    outcomes : dict of str to RunOutcome
        The u* runs on `screened`.
    run_warnings : list of str
        Their warnings.
    screened : pandas.DataFrame
        The screened record.
    rerun : callable
        ``rerun(screened)`` -> (outcomes, warnings).
    ustar : numpy.ndarray
        Friction velocity [m s-1].
    threshold : numpy.ndarray
        The central run's u* threshold per record [m s-1].
    is_night : numpy.ndarray of bool
        The night mask.
    year_keys : numpy.ndarray
        Budget year of each record.
    interval : int
        Record interval [minutes].
    mode : str
        ``storage_release``: ``"exclude"`` or ``"warn"``.

    Returns
    -------
    outcomes, run_warnings
        The runs (redone where mornings were excluded) and their warnings.
    screened : pandas.DataFrame
        With the excluded mornings' NEE NaN.
    released : numpy.ndarray of bool
        The measured records excluded.
    notes : list of str
        The warnings that name the release.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    released = np.zeros(len(screened), dtype=bool)
    marked = np.zeros(len(screened), dtype=bool)   # the mornings excluded, measured or not
    day = outcomes["central"][4]
    notes = storage_check.unchecked_warnings(storage_check.unchecked_years(
        outcomes["central"][1], day.reco - day.gpp, is_night, year_keys))
    years = None
    for stage, share in enumerate(storage_check.CALM_SHARES):
        day = outcomes["central"][4]
        # the mornings an earlier stage excluded no longer carry their release: a later
        # stage's excess is counted over the others only
        rows = [row for row in storage_check.morning_release(
                    outcomes["central"][1], ustar, threshold, is_night, day.reco - day.gpp,
                    year_keys, interval, share, excluded=marked)
                if years is None or row["year"] in years]
        flagged = [row["year"] for row in rows if row["flagged"]]
        if not flagged or mode != "exclude":
            notes.extend(storage_check.release_warnings(rows, 0, stage))
            break
        nee = screened["nee"].to_numpy(dtype=float)
        mornings = storage_check.release_mornings(ustar, threshold, is_night, year_keys,
                                                  flagged, interval, share)
        marked |= mornings
        more = mornings & np.isfinite(nee)
        released |= more
        screened = screened.assign(nee=np.where(more, np.nan, nee))
        outcomes, run_warnings = rerun(screened)
        notes.extend(storage_check.release_warnings(rows, int(more.sum()), stage))
        years = flagged
    return outcomes, run_warnings, screened, released, notes


class RunsStage(NamedTuple):
    """The u* runs after the storage check.

    Attributes
    ----------
    outcomes : dict of str to RunOutcome
        By run name, ``"central"`` first.
    screened : pandas.DataFrame
        The screened record, the excluded mornings' NEE NaN.
    released : numpy.ndarray of bool
        The measured records excluded as a morning release.
    warnings : list of str
        The runs' warnings, then those naming the release.
    """

    outcomes: dict
    screened: pd.DataFrame
    released: np.ndarray
    warnings: list


def runs_with_release(inputs: RunInputs, runs, driver, config, year_keys, interval, findings,
                      step) -> RunsStage:
    """Every u* run, redone without the mornings that show a release of stored CO2.

    Parameters
    ----------
    inputs : RunInputs
        The record, screened, with its filled drivers.
    runs : dict of str to numpy.ndarray
        Each run's u* threshold per record [m s-1] (``"central"`` first).
    driver : fluxpart.respiration_driver.DriverDecision
        The respiration temperature, its delay and the choice's nighttime fits.
    config : Config
        Settings (``storage_release``).
    year_keys : numpy.ndarray
        Budget year of each record.
    interval : int
        Record interval [minutes].
    findings : list of fluxpart.preflight.Finding
        The preflight findings; a partitioning error names the uptake in the dark
        they found (:func:`fluxpart.night_uptake.named_in_failure`).
    step : callable
        Progress, called after each run of the first pass.

    Returns
    -------
    RunsStage
    """
    def all_runs(screened_now, report=lambda label: None):
        """The u* runs on `screened_now` and their warnings (progress only the first time)."""
        # one after another: in two threads the runs cost ~12 % more CPU and ~16 MB more
        # memory for no gain in wall time (GIL-bound); sites run in parallel in `batch`
        notes = []
        return threshold_runs(inputs._replace(screened=screened_now), runs, driver.temperature,
                              config, driver.night_fits.get(driver.temperature), driver.delay,
                              notes, report, year_keys), notes

    # a partitioning error names the uptake in the dark preflight found (night_uptake),
    # and a site flag that rejects most records with NEE (round review97)
    with screening_stage.flag_named_in_failure(inputs.frame), \
            night_uptake.named_in_failure(findings):
        outcomes, run_warnings = all_runs(inputs.screened, step)
        # the release of CO2 stored on calm nights, seen in the mornings after them
        # (storage_check); where it shows, those mornings are excluded and the runs redone
        outcomes, run_warnings, screened, released, release_notes = storage_release(
            outcomes, run_warnings, inputs.screened, all_runs,
            inputs.frame["ustar"].to_numpy(dtype=float), runs["central"], inputs.is_night,
            year_keys, interval, config.storage_release)
    return RunsStage(outcomes, screened, released, [*run_warnings, *release_notes])
