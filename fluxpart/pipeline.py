"""The thin orchestrator: validate once, run the stages in a fixed order, return a Result.

Stages (each a pure function of its own module):

0. the record fitted to its budget years: a fragment of less than a day left out, up to a
   day absent at a year's edges added as gaps (:func:`fluxpart.timestamps.budget_year_edges`);
1. solar geometry and the night mask (:mod:`fluxpart.solar`);
2. screening: plausible ranges, the site's flag, despiking (:mod:`fluxpart.screening`);
   then, before any fit, the clock and site-geometry check (:mod:`fluxpart.clock`) and
   the preflight of every stage (:mod:`fluxpart.preflight`): a clock problem (unless
   ``clock_check`` allows it) or a condition a stage cannot run with stops here;
3. the u* threshold, detected with its bootstrap distribution or fixed (:mod:`fluxpart.ustar`);
4. gap filling of the drivers, then of NEE after the u* filter (:mod:`fluxpart.gapfill`);
5. nighttime and daytime partitioning (:mod:`fluxpart.partition`); where exactly one
   method cannot fit, the run goes on with its GPP and Reco NaN (:mod:`fluxpart.method_failure`);
6. steps 4–5 again for each u* scenario threshold (the threshold's share of uncertainty);
7. daily, monthly and annual budgets with coverage (:mod:`fluxpart.budget`), the
   daytime/nighttime agreement (:mod:`fluxpart.agreement`), the random error of NEE
   and the uncertainty budget (:mod:`fluxpart.uncertainty`) and the audit trail
   (:mod:`fluxpart.audit`).

Nothing here computes science; it only passes :class:`~fluxpart.config.Config`
settings to the stage functions and assembles their outputs.
"""

from __future__ import annotations

import logging
import warnings as _warnings
from pathlib import Path

import numpy as np
import pandas as pd

from . import (
    agreement,
    audit,
    budget,
    budget_warnings,
    canonical_frame,
    central_run,
    gapfill,
    method_failure,
    night_uptake,
    preflight,
    respiration_driver,
    result_tables,
    schema,
    screening,
    screening_stage,
    settings_notes,
    timestamps,
    uncertainty,
    uncertainty_assembly,
    unit_checks,
    ustar,
    ustar_fixed,
    ustar_runs,
    ustar_seasonal,
    ustar_stage,
)
from .config import Config
from .errors import (
    ConfigError,
    FluxpartWarning,
    ImplausibleValueError,
    InputFileError,
    InsufficientDataError,
)
from .fingerprint import load_blas_libraries
from .partition import pieces
from .result import Result, load  # noqa: F401  (re-exported: fluxpart.pipeline.load)
from .site import Site

__all__ = ["Result", "check_record", "load", "process", "process_site_config",
           "screening_summary", "stage_count"]

#: Progress of :func:`process` at INFO level (``logging.getLogger("fluxpart")``).
_LOG = logging.getLogger("fluxpart.pipeline")

def check_record(frame: pd.DataFrame, site: Site, config: Config | None = None, *,
                 time_marks: str | None = None, shift_applied_minutes: float = 0.0,
                 columns: dict | None = None):
    """The clock verdict and every preflight finding of a record, as ``check`` lists them.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical record, as for :func:`process`.
    site : Site
        The tower's location.
    config : Config, optional
        Settings; defaults when omitted.
    time_marks : str, optional
        The file's declared stamp convention, for the clock message.
    shift_applied_minutes : float, optional
        Minutes the reader subtracted from the file's stamps.
    columns : dict, optional
        Canonical name -> file column (``ReadReport.columns``), named in messages.

    Returns
    -------
    verdict : fluxpart.clock.ClockVerdict or None
        None where ``clock_check = "off"``.
    findings : list of fluxpart.preflight.Finding
        Conditions that make a stage fail (``fatal``) or fall back.
    """
    config = canonical_frame.checked_config(config)
    frame, _ = canonical_frame.prepare(frame, site)
    interval = canonical_frame.validate(frame)
    frame, edges = canonical_frame.budget_record(frame, config, interval)
    geometry, is_night, screens = screening_stage.geometry_and_screening(frame, site, config, interval)
    verdict, findings = screening_stage.clock_and_preflight(
        frame, site, config, interval, geometry, is_night, screens,
        {"time_marks": time_marks, "shift_minutes": shift_applied_minutes, "columns": columns})
    # events outside the record (a mistyped year) are named before a run, as `run` names them
    return verdict, findings + [preflight.Finding("annual budget", note, False)
                                for note in edges] + [
        preflight.Finding("gap filling", note, False)
        for note in gapfill.event_notes(frame.index, config.events)]


def screening_summary(frame: pd.DataFrame, site: Site, config: Config | None = None):
    """Screen a record and estimate its u* threshold, without filling or partitioning.

    What ``fluxpart check`` reports beyond the reader: records per screening reason
    (before the u* filter) and the u* threshold per year and season with its
    bootstrap percentiles.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical record, as for :func:`process`.
    site : Site
        The tower's location.
    config : Config, optional
        Settings; defaults when omitted.

    Returns
    -------
    counts : pandas.Series
        Records per screening reason (``kept``, ``missing``, ``out_of_range``, ...),
        without the two that follow the u* threshold (``low_ustar``, ``morning_release``).
    thresholds : pandas.DataFrame
        The u* table of :attr:`Result.ustar`.
    """
    config = canonical_frame.checked_config(config)
    frame, _ = canonical_frame.prepare(frame, site)
    interval = canonical_frame.validate(frame)
    frame, _ = canonical_frame.budget_record(frame, config, interval)
    _, is_night, screens = screening_stage.geometry_and_screening(frame, site, config, interval)
    table, _, _, _ = ustar_stage.ustar_thresholds(frame, screens.screened, is_night, site, config)
    # the reasons decided after the u* threshold (low u*, mornings after calm nights) are
    # not known here: a count of 0 would read as none
    return screens.counts.drop(labels=["low_ustar", "morning_release"], errors="ignore"), table


def stage_count(config: Config) -> int:
    """Number of progress steps :func:`process` reports for `config`."""
    scenarios = (len(config.ustar_scenarios) if config.ustar_method != "fixed"
                 and config.ustar_bootstrap_draws > 0 else 0)
    return 3 + 1 + scenarios


def process(frame: pd.DataFrame, site: Site, config: Config | None = None, *,
            provenance: dict | None = None, progress=None) -> Result:
    """Turn a canonical site record into gap-filled, partitioned fluxes and budgets.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical variables (``nee`` [µmol m-2 s-1], ``rg`` [W m-2], ``tair`` [°C],
        ``vpd`` [hPa], ``ustar`` [m s-1], optionally ``tsoil`` [°C], ``rh`` [%],
        ``nee_flag``) on a regular 30- or 60-minute DatetimeIndex of interval starts
        in local standard time; one or more years. Not modified. A tz-aware index
        is converted with ``site.utc_offset``; other columns are ignored (each with
        a warning); numeric columns of any dtype (float32, nullable, Arrow) are read
        as float64, so the tables' column types do not depend on them, and infinite
        values as missing (with a warning). A budget year at either end holding less than a day of records is
        left out, and up to a day absent at a year's edges is added as gaps
        (:func:`fluxpart.timestamps.budget_year_edges`; each with a warning).
    site : Site
        Location of the tower.
    config : Config, optional
        Settings; ``Config()`` (the published defaults) when omitted.
    provenance : dict, optional
        Facts about the input recorded in the manifest (file paths and hashes).
    progress : callable, optional
        Called as ``progress(label)`` after each of the :func:`stage_count` steps
        (screening, u* threshold and bootstrap, each u* scenario, budgets).

    Returns
    -------
    Result
        Time series, budgets, u* thresholds, parameter tables and warnings.

    Raises
    ------
    FluxpartError
        (a subclass) for bad input or settings, or too little data for both partitioning
        methods (one that cannot fit leaves its columns NaN, with a warning).
    """
    config = canonical_frame.checked_config(config)
    if not isinstance(site, Site):
        raise ConfigError(f"site must be a fluxpart.Site, got {type(site).__name__}")
    load_blas_libraries()       # now, while memory is free (fingerprint.load_blas_libraries)
    # variables a site config's [input] accept_units kept as they are (a frame of the reader)
    accepted = tuple(getattr(frame, "attrs", {}).get("accept_units", ()))
    frame, notes = canonical_frame.prepare(frame, site)
    interval = canonical_frame.validate(frame)
    frame, edges = canonical_frame.budget_record(frame, config, interval)
    frame = frame.copy()
    frame.index = frame.index.rename("time")
    temperature = canonical_frame.respiration_setting(config, frame)
    warnings = [f"input: {text}" for text in [*(provenance or {}).get("reader", {}).get(
        "warnings", []), *notes]] + [f"budget year: {text}" for text in edges]
    warnings.extend(gapfill.event_notes(frame.index, config.events))

    def step(label: str) -> None:
        _LOG.info("%s: %s", site.name, label)     # the standard logging route (silent by default)
        if progress is not None:
            progress(label)

    geometry, is_night, screens = screening_stage.geometry_and_screening(frame, site, config, interval)
    screened = screens.screened
    if "reader" not in (provenance or {}):      # a caller's frame: no reader checked its units
        refusal = unit_checks.frame_refusal(frame, interval, accept_units=accepted)
        if refusal:
            raise ImplausibleValueError(f"input: {refusal}")
        warnings.extend(f"input: {text}" for text in unit_checks.frame_messages(
            frame, geometry["potential_radiation"].to_numpy(), interval, accept_units=accepted))
    verdict, findings = screening_stage.clock_and_preflight(frame, site, config, interval, geometry, is_night,
                                             screens, (provenance or {}).get("reader"))
    screening_stage.refuse(verdict, findings, config)
    if verdict is not None:
        warnings.extend(verdict.problems)
    warnings.extend(str(f) for f in findings if f.stage not in ("u* threshold", "annual budget"))
    clock_record = ({"setting": "off", "status": "not_checked"} if verdict is None
                    else {"setting": config.clock_check, **verdict.to_dict()})
    step("screened")

    ustar_table, ustar_draws, central, scenario_thresholds = ustar_stage.ustar_thresholds(
        frame, screened, is_night, site, config)
    step("u* threshold")
    warnings.extend(ustar.source_notes(ustar_table, config.ustar_threshold))
    unused = ustar.unused_threshold_note(ustar_table, config.ustar_threshold,
                                         config.ustar_method, Config().ustar_threshold)
    warnings.extend([unused] if unused else [])
    if config.ustar_method == "fixed":
        # a fixed threshold the night records reject as too low (round mistakes24)
        low = ustar_fixed.fixed_threshold_note(
            frame.index, screened["nee"].to_numpy(), screened["ustar"].to_numpy(),
            screened["tair"].to_numpy(), is_night, site.latitude, config.ustar_threshold,
            config, ustar.CANOPY_FLOORS[site.canopy] if config.ustar_min_threshold is None
            else config.ustar_min_threshold)
        warnings.extend([low] if low else [])
    warnings.extend(settings_notes.ignored_settings(config))

    filled_drivers = gapfill.fill_drivers(
        screened, rg_tolerance=config.rg_tolerance, max_window_days=config.gapfill_max_window_days,
        interpolation_hours=config.gapfill_interpolation_hours)
    conditions = gapfill.driver_conditions(filled_drivers, soil=True)
    if config.gapfill_clearness_tolerance > 0:
        conditions["clearness"] = gapfill.clearness_index(
            conditions["rg"].to_numpy(), geometry["potential_radiation"].to_numpy())

    year_runs = {"central": ustar_stage.per_record(frame.index, central),
                 **{name: ustar_stage.per_record(frame.index, values)
                    for name, values in scenario_thresholds.items()}}
    contrast = ustar_seasonal.seasonal_contrast(ustar_table)
    runs = ustar_seasonal.threshold_runs(frame.index, site.latitude, ustar_table, year_runs,
                                         contrast, config.ustar_distinct_seasons)
    warnings.extend(ustar_seasonal.contrast_warnings(contrast, config.ustar_distinct_seasons))
    forced = respiration_driver.forced_temperature_note(temperature, frame.index, screened, is_night,
                                      runs["central"], config)
    warnings.extend([forced] if forced else [])
    temperature, choice = respiration_driver.chosen_temperature(temperature, frame.index, screened, is_night,
                                              runs["central"], config)
    if (choice is not None and not np.isfinite(choice.tsoil_weight) and "tsoil" in frame.columns
            and np.isfinite(frame["tsoil"].to_numpy(dtype=float)).any()):
        # soil temperature is in the record but could not be weighed against air temperature
        warnings.append(f"respiration temperature: {temperature} used, as {choice.reason}; the "
                        "part of the Reco and GPP uncertainty from the choice of temperature is "
                        "not quantified (reco_uncertainty_temperature_driver NaN)")
    # the choice fitted each candidate on the central run's measured NEE: its fits are
    # reused where the measured temperature is the same series
    delay = 0 if choice is None else choice.delay_records
    night_fits = {} if choice is None else {
        name: fit for name, fit in choice.fits.items()
        if np.array_equal(frame[name.removesuffix("_undelayed")].to_numpy(dtype=float),
                          screened[name.removesuffix("_undelayed")].to_numpy(dtype=float),
                          equal_nan=True)
        or name == temperature}
    year_keys = timestamps.budget_year_numbers(frame.index, config.year_start)

    def all_runs(screened_now, report=lambda label: None):
        """The u* runs on `screened_now` and their warnings (progress only the first time)."""
        # one after another: in two threads the runs cost ~12 % more CPU and ~16 MB more
        # memory for no gain in wall time (GIL-bound); sites run in parallel in `batch`
        notes = []
        return ustar_runs.threshold_runs((frame, screened_now, filled_drivers, conditions, is_night),
                               runs, temperature, config, night_fits.get(temperature), delay,
                               notes, report, year_keys), notes

    # a partitioning error names the uptake in the dark preflight found (night_uptake)
    with night_uptake.named_in_failure(findings):
        outcomes, run_warnings = all_runs(screened, step)
        # the release of CO2 stored on calm nights, seen in the mornings after them
        # (storage_check); where it shows, those mornings are excluded and the runs redone
        outcomes, run_warnings, screened, released, release_notes = ustar_runs.storage_release(
            outcomes, run_warnings, screened, all_runs, frame["ustar"].to_numpy(dtype=float),
            runs["central"], is_night, year_keys, interval, config.storage_release)
    warnings.extend(run_warnings)
    warnings.extend(release_notes)

    # the nighttime method's central Reco averaged over the two respiration forms; the
    # same per-record shift in every u* run keeps their spread the threshold's alone
    form = central_run.averaged_form(frame, filled_drivers, outcomes["central"], is_night, temperature,
                             config, delay)
    outcomes = {name: (*outcome[:3], central_run.shifted(outcome[3], form.shift), outcome[4])
                for name, outcome in outcomes.items()}
    too_calm, nee_measured, filled, night, day = outcomes["central"]
    warnings.extend(gapfill.crossed_event_notes(frame.index, config.events,
                                                filled.attrs.pop("events_crossed", [])))
    if config.events:
        warnings.extend(pieces.window_notes(frame.index, gapfill.event_breaks(
            frame.index, config.events), night.rref_windows, day.parameters))
    day_evidence = central_run.daytime_driver_evidence(frame, screened, filled_drivers,
                                            outcomes["central"], is_night, temperature, delay,
                                            config)
    fell_back = day.parameters["e0_source"] == "fallback"
    if config.e0_fallback is None and fell_back.any():
        warnings.append(
            f"daytime partitioning: the night data gave no acceptable E0 on {temperature} in "
            f"{int(fell_back.sum())} of {len(fell_back)} windows (pooled over the year from "
            f"windows of at least {config.e0_min_points} night records spanning "
            f"{config.e0_min_temperature_range} K within "
            f"{max(config.daytime_e0_window_days)} days); "
            f"{central_run.fallback_e0_text(day.parameters, fell_back, night.e0_annual)} was used there, "
            "flagged 'fallback' in the daytime parameter table, so the two methods are not "
            "independent in their E0")
    flags = screens.flags.assign(nee_low_ustar=too_calm, nee_morning_release=released)
    reason = screens.reason.to_numpy().copy()
    reason[(reason == 0) & too_calm] = result_tables.REASON_LOW_USTAR
    reason[(reason == 0) & released] = result_tables.REASON_MORNING_RELEASE
    timeseries = pd.concat([
        frame,
        geometry,
        pd.DataFrame({"is_night": is_night}, index=frame.index),
        flags,
        pd.DataFrame({"rejection_reason": reason.astype(np.int8),
                      "ustar_threshold": runs["central"],
                      "nee_measured": nee_measured}, index=frame.index),
        filled_drivers,
        filled.rename(columns=lambda c: "nee_filled" if c == "value" else f"nee_fill_{c}"),
        pd.DataFrame({"reco_nighttime": night.reco, "gpp_nighttime": night.gpp,
                      "rref_nighttime": night.rref, "e0_nighttime": night.e0,
                      "reco_daytime": day.reco, "gpp_daytime": day.gpp}, index=frame.index),
    ], axis=1)

    budgets = budget.aggregate(timeseries, interval, fluxes=result_tables.BUDGET_FLUXES,
                               year_start=config.year_start)
    # year_keys: budget year of each record ([processing] year_start); u* thresholds and
    # the annual E0 stay per calendar year of data
    daily = agreement.method_agreement(budgets.daily, config.agreement_margin)
    monthly = agreement.method_agreement(budgets.monthly, config.agreement_margin)
    annual = agreement.method_agreement(budgets.annual, config.agreement_margin)
    warnings.extend(agreement.disagreements(annual, config.agreement_margin))
    step("budgets")
    # the year's detected threshold (seasons filtered higher are in the time series)
    annual = annual.assign(ustar_threshold=pd.Series(year_runs["central"]).groupby(year_keys)
                           .max().reindex(annual.index).to_numpy())
    annual = uncertainty_assembly.scenario_spread(annual, outcomes, frame.index, interval, year_keys)

    parameters = {}
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
    daily, monthly, annual, gapfill_model, driver_notes = uncertainty_assembly.budget_uncertainty(
        daily, monthly, annual, timeseries, outcomes, sigma, conditions, is_night, night, day,
        temperature, interval, config, year_keys, night_fits, error_model, form, delay,
        day_evidence)
    warnings.extend(driver_notes)
    parameters["gapfill_error_model"] = gapfill_model
    # a method that could not fit has no sums, so no uncertainty of them either
    unfitted = method_failure.failed_methods(night, day)
    daily, monthly, annual = (method_failure.blank(table, unfitted)
                              for table in (daily, monthly, annual))
    annual = annual.join(uncertainty.carbon_accounting_units(annual))
    audit_table = audit.audit_trail(timeseries, year_keys=year_keys)
    counts = screens.counts.copy()
    counts[screening.REASON_CODES[result_tables.REASON_LOW_USTAR]] = int((reason == result_tables.REASON_LOW_USTAR).sum())
    counts[screening.REASON_CODES[result_tables.REASON_MORNING_RELEASE]] = int(
        (reason == result_tables.REASON_MORNING_RELEASE).sum())
    counts[screening.REASON_CODES[0]] = int((reason == 0).sum())
    warnings.extend(budget_warnings.budget_year_warnings(
        annual, timeseries, year_keys, interval, config, list(result_tables.BUDGET_FLUXES.values()),
        unfitted))
    for text in warnings:
        _warnings.warn(text, FluxpartWarning, stacklevel=2)
    facts = schema.file_metadata(site, interval)
    parameters = {"nighttime_e0": night.e0_windows, "nighttime_e0_annual": night.e0_annual,
                  "nighttime_rref": night.rref_windows, "daytime": day.parameters,
                  "ustar_bootstrap": ustar_draws, **parameters}
    return Result(
        site=site, config=config,
        timeseries=schema.with_metadata(result_tables.labelled(timeseries), "timeseries", facts),
        daily=schema.with_metadata(daily, "daily", facts),
        monthly=schema.with_metadata(monthly, "monthly", facts),
        annual=schema.with_metadata(annual, "annual", facts),
        ustar=schema.with_metadata(ustar_table, "ustar", facts),
        audit=schema.with_metadata(audit_table, "audit", facts),
        parameters={name: schema.with_metadata(table, f"parameters_{name}", facts)
                    for name, table in parameters.items()},
        screening_counts=schema.with_metadata(counts, "screening", facts),
        warnings=tuple(warnings),
        provenance={**(provenance or {}), "screening": screens.thresholds, "clock": clock_record,
                    "preflight": [str(f) for f in findings],
                    "respiration_driver": ({"setting": temperature} if choice is None
                                           else choice.to_dict()),
                    "respiration_form": form.to_dict(),
                    "uncertainty": {"confidence": uncertainty.CONFIDENCE,
                                    "not_quantified": list(uncertainty.NOT_QUANTIFIED),
                                    "checked": uncertainty.CALIBRATION_CHECK}})


def process_site_config(path, config: Config | None = None, *, progress=None,
                        input_path=None) -> Result:
    """Read a site config (TOML) and its input file, then :func:`process` them.

    The input file's path and SHA-256 and the config file's path, SHA-256 and
    full text are recorded in the result's provenance (and so in
    ``manifest.json``). `input_path` (a path, or a list of paths for several
    files), when given, replaces the config's ``[input] path`` (an auditor's
    moved copy of the input).
    """
    import hashlib

    from .fingerprint import code_fingerprint
    from .io import read_site_config

    given = None if input_path is None else (
        input_path if isinstance(input_path, (list, tuple)) else [input_path])
    # the code that runs is the code loaded now (the fingerprint is cached per process):
    # an edit to the package's files during the run must not be recorded as its code
    code_fingerprint()
    config_bytes = Path(path).read_bytes()
    site_config = read_site_config(path, input_paths=given)
    input_before = site_config.input_record()
    frame, report = site_config.read()
    input_record = site_config.input_record()
    if input_record != input_before:
        raise InputFileError(
            f"[input] path: {site_config.input_path} changed while it was read (its SHA-256 "
            "differs before and after); the result would record another file than the one "
            "computed from: rerun once the file is complete (a logger or copy still writing?)")
    # a given fixed threshold stands for one the site config lacks (fluxpart verify of a
    # result from before 0.24.0, which took the default; Config.from_toml)
    from_file = Config.from_toml(path, recorded_threshold=config.ustar_threshold if (
        config is not None and config.ustar_method == "fixed") else None)
    if Path(path).read_bytes() != config_bytes:
        # saved from an editor while the run read its input: the site, the settings and the
        # recorded text came from different versions (a genuine result then failed verify)
        raise InputFileError(
            f"site config {str(path)!r} changed while the run read it; the result would "
            "record another version than the one computed from: rerun once it is saved")
    config = from_file if config is None else config
    provenance = {
        # where the settings came from: verify reruns from the site config's own
        # [processing] table when they came from it, so an edited setting is named
        "settings": "site config" if config == from_file else "given by the caller",
        "reader": report.to_dict(),
        "site_config": {"path": str(Path(path).resolve()),
                        "sha256": hashlib.sha256(config_bytes).hexdigest(),
                        "text": config_bytes.decode("utf-8", errors="replace")},
        "input": input_record,
    }
    return process(frame, site_config.site, config, provenance=provenance, progress=progress)
