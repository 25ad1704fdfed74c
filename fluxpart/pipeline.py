"""The thin orchestrator: validate once, run the stages in a fixed order, return a Result.

Stages (each a pure function of its own module):

0. the record fitted to its budget years: a fragment of less than a day left out, up to a
   day absent at a year's edges added as gaps (:func:`fluxpart.budget_calendar.budget_year_edges`);
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
settings to the stage functions and hands each stage's record to the next:
:mod:`fluxpart.canonical_frame` (0), :mod:`fluxpart.screening_stage` (1-2),
:mod:`fluxpart.ustar_stage` (3), :mod:`fluxpart.respiration_driver`,
:mod:`fluxpart.ustar_runs` (4-6), :mod:`fluxpart.central_run`,
:mod:`fluxpart.result_tables` and :mod:`fluxpart.uncertainty_assembly` (7).
"""

from __future__ import annotations

import logging
import warnings as _warnings
from pathlib import Path

import pandas as pd

from . import (
    audit,
    budget_calendar,
    budget_warnings,
    canonical_frame,
    central_run,
    e0_foresight,
    gapfill,
    preflight,
    respiration_driver,
    result_tables,
    saturated_gaps,
    screening_stage,
    uncertainty_assembly,
    ustar_runs,
    ustar_stage,
)
from .config import Config
from .errors import ConfigError, FluxpartWarning, InputFileError, caller_stacklevel
from .fingerprint import load_blas_libraries
from .result import Result, load  # noqa: F401  (re-exported: fluxpart.pipeline.load)
from .site import Site

__all__ = ["Result", "check_record", "load", "process", "process_site_config",
           "screening_summary", "stage_count"]

#: Progress of :func:`process` at INFO level (``logging.getLogger("fluxpart")``).
_LOG = logging.getLogger("fluxpart.pipeline")


def check_record(frame: pd.DataFrame, site: Site, config: Config | None = None, *,
                 time_marks: str | None = None, shift_applied_minutes: float = 0.0,
                 columns: dict | None = None, time_zone: str | None = None):
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
    time_zone : str, optional
        The ``[input] time_zone`` the reader converted the stamps from, for the clock
        message.

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
    geometry, is_night, screens = screening_stage.geometry_and_screening(frame, site, config,
                                                                         interval)
    verdict, findings = screening_stage.clock_and_preflight(
        frame, site, config, interval, geometry, is_night, screens,
        {"time_marks": time_marks, "shift_minutes": shift_applied_minutes, "columns": columns,
         "stamp_conversions": {"time_zone": time_zone} if time_zone else {}})
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
        The u* table of :attr:`Result.ustar`; ``attrs["setting_notes"]`` holds the warnings
        about a set threshold or floor (:func:`fluxpart.ustar_stage.threshold_setting_notes`),
        ``attrs["e0_stops"]`` the run's stop at the nighttime E0 where no year has one
        (:func:`fluxpart.e0_foresight.e0_stops`).
    """
    config = canonical_frame.checked_config(config)
    frame, _ = canonical_frame.prepare(frame, site)
    interval = canonical_frame.validate(frame)
    frame, _ = canonical_frame.budget_record(frame, config, interval)
    _, is_night, screens = screening_stage.geometry_and_screening(frame, site, config, interval)
    table, _, central, _ = ustar_stage.ustar_thresholds(frame, screens.screened, is_night,
                                                        site, config)
    # a set threshold or floor the night records disagree with, as `run` warns it
    # (review52: check exited 0 on a floor that moved NEE by 4 sigma). Kept in the
    # table's attrs, not a third return value (leftovers49, read and left): the public
    # return is the pair `counts, table` that callers unpack, and a third value or a
    # result object would break each of them; the notes judge the thresholds of this
    # table, pandas carries attrs through its selections, and a reader that finds none
    # (a table from elsewhere) lists none (`attrs.get`)
    table.attrs["setting_notes"] = tuple(ustar_stage.threshold_setting_notes(
        frame, screens.screened, is_night, site, config))
    # the run's stop at the E0 fit, now that its night records are known (falsealarm52)
    table.attrs["e0_stops"] = tuple(e0_foresight.e0_stops(screens.screened, is_night, central,
                                                          config))
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
        (:func:`fluxpart.budget_calendar.budget_year_edges`; each with a warning).
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

    def step(label: str) -> None:
        _LOG.info("%s: %s", site.name, label)     # the standard logging route (silent by default)
        if progress is not None:
            progress(label)

    # 0. the record: canonical, validated once, on its budget years
    record = canonical_frame.run_record(frame, site, config, provenance)
    frame, interval, warnings = record.frame, record.interval, record.warnings
    # 1-2. solar geometry, screening, unit checks of a caller's frame, clock and preflight
    checked = screening_stage.screened_record(frame, site, config, interval, provenance,
                                              record.accepted)
    warnings.extend(checked.warnings)
    step("screened")
    # 3. the u* threshold per year, its bootstrap and scenarios; each run's per record
    found = ustar_stage.threshold_stage(frame, checked.screens.screened, checked.is_night, site,
                                        config, checked.geometry["potential_radiation"])
    step("u* threshold")
    warnings.extend(found.warnings)
    inputs = ustar_runs.run_inputs(frame, checked.screens.screened, checked.is_night,
                                   checked.geometry["potential_radiation"].to_numpy(), config)
    thresholds = ustar_stage.record_runs(frame.index, site.latitude, found, config)
    warnings.extend(thresholds.warnings)
    # the respiration temperature, chosen on the central run's night NEE
    driver = respiration_driver.resolve(record.temperature, frame, inputs.screened,
                                        inputs.is_night, thresholds.runs["central"], config,
                                        inputs.sun_up)
    warnings.extend(driver.warnings)
    year_keys = budget_calendar.budget_year_numbers(frame.index, config.year_start)
    # 4-6. gap filling and both partitionings at each u* run's thresholds (storage checked)
    done = ustar_runs.runs_with_release(inputs, thresholds.runs, driver, config, year_keys,
                                        interval, checked.findings, step)
    warnings.extend(done.warnings)
    inputs = inputs._replace(screened=done.screened)
    central = central_run.follow_ups(inputs, done.outcomes, driver, config)
    warnings.extend(central.warnings)
    # 7. the time series, the budgets, their uncertainty and the audit trail
    timeseries, reason = result_tables.timeseries_table(
        inputs, checked.geometry, checked.screens, central.outcomes["central"], done.released,
        thresholds.runs["central"])
    budgets = result_tables.budget_tables(timeseries, interval, config, central.outcomes,
                                          thresholds.year_runs["central"], year_keys)
    warnings.extend(budgets.warnings)
    step("budgets")
    assessed = uncertainty_assembly.uncertainty_stage(timeseries, budgets, central, inputs,
                                                      driver, interval, config, year_keys)
    warnings.extend(assessed.warnings)
    audit_table = audit.audit_trail(assessed.timeseries, year_keys=year_keys)
    warnings.extend(budget_warnings.budget_year_warnings(
        assessed.annual, assessed.timeseries, year_keys, interval, config,
        list(result_tables.BUDGET_FLUXES.values()), assessed.unfitted))
    warnings.extend(saturated_gaps.run_warnings(assessed.timeseries, assessed.annual,
                                                year_keys, interval, config))
    level = caller_stacklevel()
    for text in warnings:
        _warnings.warn(text, FluxpartWarning, stacklevel=level)
    night, day = central.outcomes["central"].night, central.outcomes["central"].day
    parameters = {"nighttime_e0": night.e0_windows, "nighttime_e0_annual": night.e0_annual,
                  "nighttime_rref": night.rref_windows, "daytime": day.parameters,
                  "ustar_bootstrap": found.draws, **assessed.parameters}
    tables = {"timeseries": assessed.timeseries, "daily": assessed.daily,
              "monthly": assessed.monthly, "annual": assessed.annual, "ustar": found.table,
              "audit": audit_table,
              "screening_counts": result_tables.screening_counts(checked.screens.counts, reason)}
    return result_tables.result(
        site, config, interval, tables, parameters, warnings,
        result_tables.run_provenance(provenance, checked, driver, central.form,
                                     central.night_light, central.shape))


def process_site_config(path, config: Config | None = None, *, progress=None,
                        input_path=None) -> Result:
    """Read a site config (TOML) and its input file, then :func:`process` them.

    The input file's path and SHA-256 and the config file's path, SHA-256 and
    full text are recorded in the result's provenance (and so in
    ``manifest.json``), so that ``fluxpart verify`` can rerun the written folder.

    Parameters
    ----------
    path : str or path-like
        The site config (TOML); its ``[input] path`` is relative to its folder.
    config : Config, optional
        The settings of the run. Omitted: the file's ``[processing]`` table
        (:meth:`Config.from_toml`). Given, it **replaces** that table whole, it is not
        merged with it: its ``events``, ``year_start`` and every other setting are its
        own. To change one setting of the file's, give
        ``dataclasses.replace(Config.from_toml(path), seed=3)``.
    progress : callable, optional
        As for :func:`process`.
    input_path : str, path-like or list, optional
        Replaces the config's ``[input] path`` (an auditor's moved copy of the input;
        a list for several files).

    Returns
    -------
    Result
        As :func:`process` returns it, with the input's provenance.

    References
    ----------
    FIPS 180-4, Secure Hash Standard (SHA-256, the hashes recorded) (m).
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
