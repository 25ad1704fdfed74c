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

import dataclasses
import datetime
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
    clock,
    gap_sides,
    gapfill,
    method_failure,
    night_uptake,
    preflight,
    schema,
    screening,
    settings_notes,
    solar,
    storage_check,
    timestamps,
    uncertainty,
    unit_checks,
    ustar,
    ustar_fixed,
    ustar_seasonal,
)
from ._validate import unique_columns
from .config import Config
from .errors import (
    ConfigError,
    FluxpartError,
    FluxpartWarning,
    ImplausibleValueError,
    InputFileError,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)
from .fingerprint import load_blas_libraries
from .partition import daytime, nighttime, pieces, respiration_form, temperature_choice
from .result import Result, load  # noqa: F401  (re-exported: fluxpart.pipeline.load)
from .site import Site
from .variables import REQUIRED, VARIABLES

__all__ = ["Result", "check_record", "load", "process", "process_site_config",
           "screening_summary", "stage_count"]

#: Progress of :func:`process` at INFO level (``logging.getLogger("fluxpart")``).
_LOG = logging.getLogger("fluxpart.pipeline")

#: The respiration temperature a run does not use, of the one it uses.
_OTHER_TEMPERATURE = {"tair": "tsoil", "tsoil": "tair"}
_BUDGET_FLUXES = {"nee_filled": "nee", "gpp_nighttime": "gpp_nighttime",
                  "reco_nighttime": "reco_nighttime", "gpp_daytime": "gpp_daytime",
                  "reco_daytime": "reco_daytime"}
_REASON_LOW_USTAR = {name: code for code, name in screening.REASON_CODES.items()}["low_ustar"]
_REASON_MORNING_RELEASE = {name: code for code, name
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


def _config(config) -> Config:
    """The settings given, or the published defaults; anything else is refused."""
    if config is None:
        return Config()
    if not isinstance(config, Config):
        raise ConfigError(f"config must be a fluxpart.Config, got {type(config).__name__}; "
                          "build one with fluxpart.Config(seed=1, ...) or "
                          "fluxpart.Config.from_toml(path)")
    return config


def _require_columns(frame: pd.DataFrame) -> None:
    """Refuse a frame without the required columns, naming the columns it has."""
    if isinstance(frame.columns, pd.MultiIndex):
        raise MissingColumnError(f"the frame's column labels have {frame.columns.nlevels} "
                                 "levels; give one level of canonical names (nee, rg, ...), "
                                 "e.g. with frame.droplevel(1, axis=1)")
    unique_columns([column for column in frame.columns if column in VARIABLES])
    missing = [name for name in REQUIRED if name not in frame.columns]
    if missing == ["vpd"] and "rh" in frame.columns:
        raise MissingColumnError("column 'vpd' is missing; derive it from 'rh' and 'tair' with "
                                 "fluxpart.variables.vpd_from_rh, or read the file with "
                                 "fluxpart.read_config, which does so")
    if missing:
        given = [str(column) for column in frame.columns]
        renames = [f"{column!r} -> {name!r}" for name in missing for column in given
                   if column.strip().lower() == name]
        hint = (f"; names are case-sensitive: rename {', '.join(renames)}" if renames else "")
        raise MissingColumnError(f"required column(s) {', '.join(map(repr, missing))} missing; "
                                 f"the frame has: {', '.join(given) or 'no columns'}{hint}")


def _validate(frame: pd.DataFrame) -> int:
    """Check the canonical frame once; return its interval [minutes]."""
    if not isinstance(frame, pd.DataFrame):
        raise FluxpartError(f"process() needs a pandas DataFrame, got {type(frame).__name__}")
    if not isinstance(frame.index, pd.DatetimeIndex):
        raise SpacingError("the frame's index must be a DatetimeIndex of interval starts "
                           f"(local standard time), got {type(frame.index).__name__}")
    if frame.index.tz is not None:
        raise SpacingError(f"the frame's index carries the time zone {frame.index.tz}; use "
                           "tz-naive local standard time and give Site.utc_offset")
    _require_columns(frame)
    for name in frame.columns:
        if not pd.api.types.is_numeric_dtype(frame[name]):
            raise FluxpartError(f"column {name!r} has dtype {frame[name].dtype}; expected numbers")
    for name in REQUIRED:
        if frame[name].isna().all():
            raise MissingColumnError(f"column {name!r} ({VARIABLES[name].description}) holds no "
                                     "values at all; every stage needs some measured records "
                                     "of it (check the column mapping and the missing codes)")
    if len(frame) < 2:
        raise SpacingError("the frame has fewer than two records")
    steps = np.diff(frame.index.to_numpy().astype("datetime64[s]").astype(np.int64))
    if (steps <= 0).any():
        row = int(np.flatnonzero(steps <= 0)[0]) + 1
        raise SpacingError(f"timestamps are not strictly increasing at row {row} "
                           f"({frame.index[row]})")
    if not (steps == steps[0]).all() or steps[0] not in (1800, 3600):
        row = int(np.flatnonzero(steps != steps[0])[0]) + 1 if not (steps == steps[0]).all() else 1
        raise SpacingError(f"records must be regularly spaced by 30 or 60 minutes (insert NaN "
                           f"rows for missing stamps); found a step of "
                           f"{steps[min(row, len(steps)) - 1] / 60:g} minutes at row {row}")
    return int(steps[0] // 60)


def _prepare(frame, site: Site) -> tuple:
    """Bring a caller's frame to the canonical form; return it and notes on what changed.

    A tz-aware index is converted to the site's local standard time (UTC +
    ``site.utc_offset``, no daylight saving) and made tz-naive; columns that are not
    canonical variables are left out; numeric columns become float64 (missing values
    and infinities NaN). The caller's frame is not modified.
    """
    notes = []
    if not isinstance(frame, pd.DataFrame):
        return frame, notes
    if isinstance(frame.index, pd.DatetimeIndex) and frame.index.tz is not None:
        zone = datetime.timezone(datetime.timedelta(hours=site.utc_offset))
        notes.append(f"the index carried the time zone {frame.index.tz}; converted to local "
                     f"standard time UTC{site.utc_offset:+g} h (Site.utc_offset)")
        frame = frame.set_axis(frame.index.tz_convert(zone).tz_localize(None), axis=0)
    _require_columns(frame)        # before other columns are left out: name them all
    unknown = [c for c in frame.columns if c not in VARIABLES]
    if unknown:
        notes.append(f"column(s) {', '.join(map(repr, map(str, unknown)))} are not canonical "
                     f"variables and were ignored (canonical: {', '.join(VARIABLES)})")
        frame = frame.drop(columns=unknown)
    # float64, as the file reader gives them: float32, float16, nullable (Float64, Int64)
    # or Arrow columns were otherwise echoed in the time series with their own type
    # (a float16 rh written as Parquet halffloat), so the tables' schema followed the
    # caller's dtypes; a missing value (pd.NA) becomes NaN
    widen = {name: "float64" for name in frame.columns
             if frame[name].dtype != np.float64 and pd.api.types.is_numeric_dtype(frame[name])}
    if widen:
        frame = frame.astype(widen)
    # +-inf, as the file reader does, is missing: kept, it leaked NumPy's "divide by zero"
    # warnings and stood in the time series beside finite filled values
    infinite = {name: int(np.isinf(frame[name].to_numpy()).sum()) for name in frame.columns
                if frame[name].dtype == np.float64}
    infinite = {name: count for name, count in infinite.items() if count}
    if infinite:
        notes.append("infinite values read as missing: " + ", ".join(
            f"{count} in {name!r}" for name, count in infinite.items()))
        frame = frame.replace([np.inf, -np.inf], np.nan)
    return frame, notes


def _budget_record(frame: pd.DataFrame, config: Config, interval: int) -> tuple:
    """The frame on its budget years (:func:`fluxpart.timestamps.budget_year_edges`): a
    fragment of less than a day left out, edge records up to a day added as gaps; and
    the notes saying so."""
    index, notes = timestamps.budget_year_edges(frame.index, interval, config.year_start)
    return (frame.reindex(index) if notes else frame), notes


def _labelled(timeseries: pd.DataFrame) -> pd.DataFrame:
    """Rejection reason, fill method and fill qualities as labelled (dictionary) columns."""
    labels = {"rejection_reason": screening.REASON_CODES, "nee_fill_method": _METHOD_LABELS}
    labels.update({c: _QUALITY_LABELS for c in timeseries.columns if c.endswith("_fill_quality")})
    return timeseries.assign(**{column: schema.as_labels(timeseries[column].to_numpy(), names)
                                for column, names in labels.items()
                                if column in timeseries.columns})


def _temperature(config: Config, frame: pd.DataFrame) -> str:
    driver = config.respiration_driver
    if driver != "auto" and driver not in frame.columns:
        raise ConfigError(f"[processing] respiration_driver = {driver!r}, but the input has no "
                          f"column {driver!r}; map it in [input.columns] or use 'tair'")
    if driver != "auto" and not np.isfinite(frame[driver].to_numpy(dtype=float)).any():
        # else both methods fail on it, and the error blames the night NEE
        raise ConfigError(f"[processing] respiration_driver = {driver!r}, but column {driver!r} "
                          "has no value (every record empty or a missing code); set "
                          "respiration_driver = 'auto' or the other temperature")
    return driver


def _chosen_temperature(driver, index, screened, is_night, threshold, config):
    """Resolve ``respiration_driver = "auto"`` on the u*-filtered night NEE (else as set)."""
    if driver != "auto":
        return driver, None
    too_calm = screening.low_ustar(screened["ustar"].to_numpy(), is_night, threshold)
    try:
        # a year without an E0 of its own takes the nearest year's only where the plain
        # fits fail (method_failure.first_fit)
        choice = method_failure.first_fit(
            lambda nearest_year: temperature_choice.choose_respiration_temperature(
                index, np.where(too_calm, np.nan, screened["nee"].to_numpy()),
                screened["tair"].to_numpy(),
                screened["tsoil"].to_numpy() if "tsoil" in screened.columns else None,
                is_night, **_nighttime_settings(config, screened["rg"].to_numpy(dtype=float),
                                                index, nearest_year)))
    except InsufficientDataError as error:
        # the nighttime method cannot fit on air temperature: the run's own fit says why
        # (and the run goes on with the daytime method where that one fits)
        return "tair", temperature_choice.TemperatureChoice(
            "tair", f"no nighttime fit to compare ({error})", {"tair": np.nan, "tsoil": np.nan},
            0, np.nan, np.nan)
    return choice.driver, choice


def _forced_temperature_note(driver, index, screened, is_night, threshold, config):
    """The warning of a set respiration temperature the night data reject, or None
    (:func:`temperature_choice.forced_driver_note` on what ``"auto"`` would choose)."""
    if driver == "auto" or "tsoil" not in screened.columns:
        return None
    try:
        _, choice = _chosen_temperature("auto", index, screened, is_night, threshold, config)
    except FluxpartError:
        return None
    return temperature_choice.forced_driver_note(driver, choice)


def _ustar_thresholds(frame, screened, is_night, site, config):
    """Return (u* table, bootstrap draws, central threshold per year, scenario thresholds).

    The central threshold of a year is the detector's value on the data; years
    without one fall back, flagged, to the fixed ``ustar_threshold``. Scenario
    thresholds are the bootstrap percentiles named in ``ustar_scenarios``.
    """
    years = pd.Index(np.unique(frame.index.year), name="year")
    if config.ustar_method == "fixed":
        table = pd.DataFrame({"year": years.to_numpy(), "period": "year", "detector": "fixed",
                              "threshold": config.ustar_threshold, "source": "fixed"})
        central = pd.Series(config.ustar_threshold, index=years, name="threshold")
        return table, pd.DataFrame(), central, {}
    found = ustar.detect_threshold(
        frame.index, screened["nee"].to_numpy(), screened["ustar"].to_numpy(),
        screened["tair"].to_numpy(), is_night, site.latitude, detector=config.ustar_method,
        draws=config.ustar_bootstrap_draws, seed=config.seed,
        min_threshold=(ustar.CANOPY_FLOORS[site.canopy] if config.ustar_min_threshold is None
                       else config.ustar_min_threshold),
        temperature_classes=config.ustar_temperature_classes,
        ustar_classes=config.ustar_classes, plateau_share=config.ustar_plateau_share,
        correlation_limit=config.ustar_correlation_limit,
        min_resolution=config.ustar_min_resolution, annual=config.ustar_annual,
        plateau_reference=config.ustar_plateau_reference)
    annual = found.annual.set_index("year").reindex(years)
    detected = annual["threshold"].astype(float)
    # a year without a detected threshold takes the nearest year's (same tower and canopy),
    # and the fixed ustar_threshold only where no year has one (ustar.nearest_detected_year)
    donors = ustar.nearest_detected_year(detected)
    percentiles = [name for name in annual.columns if name.startswith("threshold")]
    for year, donor in donors.items():
        annual.loc[year, percentiles] = annual.loc[donor, percentiles].to_numpy()
    central = annual["threshold"].astype(float).fillna(config.ustar_threshold).rename(
        "threshold")
    table = found.table()
    missing_years = set(detected.index[detected.isna()])
    year_rows = table["period"] == "year"
    # a year whose seasons all failed, detected from its nights pooled (ustar._pooled_years)
    pooled_years = set(annual.index[annual["pooled"].eq(True)])
    table["source"] = np.where(
        table["year"].isin(missing_years - set(donors)) & year_rows, "fallback",
        np.where(table["year"].isin(set(donors)) & year_rows, "nearest_year",
                 np.where(table["threshold"].isna(), "none",
                          np.where(table["year"].isin(pooled_years) & year_rows,
                                   "pooled_year", "detected"))))
    table.loc[table["source"] == "fallback", "threshold"] = config.ustar_threshold
    borrowed = table["source"] == "nearest_year"
    table.loc[borrowed, "threshold"] = table.loc[borrowed, "year"].map(
        lambda year: float(central[donors[year]]))
    table.loc[borrowed, "reason"] = table.loc[borrowed, "year"].map(
        lambda year: f"{donors[year]}'s threshold, the nearest year with one")
    # ... and the donor's bootstrap percentiles, which its u* scenarios use (above), not the
    # few draws of its own that found a threshold
    spread = [name for name in table.columns if name.startswith("threshold_p")] + ["draws_valid"]
    donor_rows = table[year_rows].set_index("year")
    for year, donor in donors.items():
        table.loc[year_rows & (table["year"] == year), spread] = (
            donor_rows.loc[donor, spread].to_numpy())
    scenarios = {}
    if config.ustar_bootstrap_draws > 0:
        for percentile in config.ustar_scenarios:
            values = annual[f"threshold_p{percentile:02d}"].astype(float)
            scenarios[f"ustar_p{percentile:02d}"] = values.fillna(central)
    return table, found.bootstrap, central, scenarios


def _geometry_and_screening(frame, site, config, interval):
    geometry = solar.solar_geometry(frame.index, site, interval_minutes=interval)
    potential = geometry["potential_radiation"].to_numpy()
    is_night = solar.night_mask(frame["rg"].to_numpy(), potential, config.night_rg_threshold)
    screens = screening.screen(
        frame, potential, is_night, despike_z=config.despike_z,
        despike_block_days=config.despike_block_days, rg_margin=config.rg_margin,
        rg_relative_margin=config.rg_relative_margin)
    return geometry, is_night, screens


def _clock_and_preflight(frame, site, config, interval, geometry, is_night, screens,
                         reader=None):
    """The clock verdict (None when ``clock_check = "off"``) and the preflight findings."""
    reader = reader or {}
    verdict = None
    if config.clock_check != "off":
        verdict = clock.check_clock(
            frame.index, frame["rg"].to_numpy(dtype=float), site.latitude, site.longitude,
            site.utc_offset, interval, time_marks=reader.get("time_marks"),
            shift_applied_minutes=float(reader.get("shift_minutes") or 0.0))
    solar.forget_courses()      # the last call that asks for the record's sun course again
    findings = preflight.preflight(
        frame, screens.screened, is_night, geometry["potential_radiation"].to_numpy(),
        screens.flags["rg_above_potential"].to_numpy(), site.latitude, config, interval,
        reader.get("columns"), sun_elevation=geometry["sun_elevation"].to_numpy())
    findings = preflight.defer_to_clock(findings, None if verdict is None else verdict.status)
    if verdict is not None:
        findings = preflight.shade_at_clock_shift(
            findings, verdict, screens.screened["rg"].to_numpy(dtype=float), frame.index,
            site.latitude, site.longitude, site.utc_offset, interval, reader.get("columns"))
    return verdict, findings


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
    config = _config(config)
    frame, _ = _prepare(frame, site)
    interval = _validate(frame)
    frame, edges = _budget_record(frame, config, interval)
    geometry, is_night, screens = _geometry_and_screening(frame, site, config, interval)
    verdict, findings = _clock_and_preflight(
        frame, site, config, interval, geometry, is_night, screens,
        {"time_marks": time_marks, "shift_minutes": shift_applied_minutes, "columns": columns})
    # events outside the record (a mistyped year) are named before a run, as `run` names them
    return verdict, findings + [preflight.Finding("annual budget", note, False)
                                for note in edges] + [
        preflight.Finding("gap filling", note, False)
        for note in gapfill.event_notes(frame.index, config.events)]


def _refuse(verdict, findings, config) -> None:
    """Stop before any fit on a clock problem (unless allowed) or a fatal finding."""
    clock_problems = list(verdict.problems) if verdict is not None else []
    if config.clock_check != "refuse":
        clock_problems = []
    fatal = [str(finding) for finding in findings if finding.fatal]
    if not clock_problems and not fatal:
        return
    text = "; ".join(clock_problems + fatal)
    if clock_problems:
        raise ConfigError(f"{text} (to process anyway, set [processing] clock_check = "
                          "\"warn\")")
    raise InsufficientDataError(f"{text} (fluxpart check lists every problem)")


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
    config = _config(config)
    frame, _ = _prepare(frame, site)
    interval = _validate(frame)
    frame, _ = _budget_record(frame, config, interval)
    _, is_night, screens = _geometry_and_screening(frame, site, config, interval)
    table, _, _, _ = _ustar_thresholds(frame, screens.screened, is_night, site, config)
    # the reasons decided after the u* threshold (low u*, mornings after calm nights) are
    # not known here: a count of 0 would read as none
    return screens.counts.drop(labels=["low_ustar", "morning_release"], errors="ignore"), table


def _per_record(index, per_year: pd.Series) -> np.ndarray:
    return per_year.reindex(index.year).to_numpy(dtype=float)


def _fill_nee(nee_measured, conditions, index, is_night, config, gaps=None, values_only=False):
    """MDS gap filling of NEE with the configured settings (also scored on artificial gaps);
    `values_only`: the filled values as an array (:func:`gapfill.fill_marginal_values`)."""
    fill = gapfill.fill_marginal_values if values_only else gapfill.fill_marginal
    return fill(
        nee_measured, conditions, index, is_night=is_night, donors=config.gapfill_donors,
        rg_tolerance=config.rg_tolerance, tair_tolerance=config.tair_tolerance,
        vpd_tolerance=config.vpd_tolerance, max_window_days=config.gapfill_max_window_days,
        min_donors=config.gapfill_min_donors, gaps=gaps, rg_window=config.gapfill_rg_window,
        night_rg_threshold=config.night_rg_threshold,
        clearness=conditions["clearness"] if "clearness" in conditions else None,
        clearness_tolerance=config.gapfill_clearness_tolerance,
        estimate=config.gapfill_estimate, breaks=gapfill.event_breaks(index, config.events))


def _nighttime_settings(config, rg, index, nearest_year=False) -> dict:
    """Keyword settings of :func:`nighttime.partition_nighttime` from `config`, with the
    measured global radiation `rg` [W m-2] its low-light Rref rule needs, the events'
    pieces of the record `index` (only where events are declared), and `nearest_year`:
    a year without an E0 of its own takes the nearest year's."""
    extra = {"e0_nearest_year": True} if nearest_year else {}
    extra.update(_event_cut(index, config))
    return {**extra, "e0_window_days": config.e0_window_days,
            "e0_window_step_days": config.e0_window_step_days,
            "e0_min_points": config.e0_min_points,
            "e0_min_temperature_range": config.e0_min_temperature_range,
            "e0_bounds": config.e0_bounds, "e0_max_relative_error": config.e0_max_relative_error,
            "e0_best_windows": config.e0_best_windows, "e0_fallback": config.e0_fallback,
            "rref_window_days": config.rref_window_days,
            "rref_min_points": config.rref_min_points,
            "rref_low_light_rg": config.rref_low_light_rg, "rg": rg,
            "e0_method": config.e0_method}


def _event_cut(index, config) -> dict:
    """``breaks`` of the partitionings' windows where `config` declares events, else none
    (a run without events calls them exactly as before)."""
    return {"breaks": gapfill.event_breaks(index, config.events)} if config.events else {}


def _respiration_temperature(table, name, delay, filled=False) -> np.ndarray:
    """The respiration driver `name` from `table` [°C], delayed by `delay` records.

    ``filled``: the gap-filled column (evaluated at every record; the first
    records take the first value), else the measured one (NaN-padded for fits).
    """
    values = table[f"{name}_filled" if filled else name].to_numpy(dtype=float)
    return temperature_choice.delayed(values, delay, pad="first" if filled else "nan")


def _fill_and_partition(frame, screened, filled_drivers, conditions, is_night, threshold,
                        temperature, config, curvature, night_fit=None, central_fill=None,
                        delay=0, skip=(), nearest_year=False):
    """Gap-fill NEE after the u* filter at `threshold` and partition it both ways.

    `night_fit`: the temperature choice's nighttime fit on the same measured NEE
    and temperature, reused instead of fitting again. `central_fill`: the central
    run's NEE fill, whose day records a u* scenario shares (below). `delay`:
    records by which the respiration temperature is delayed (the choice's).
    `skip`: methods not fitted (NaN; those the central run could not fit), and
    `nearest_year`: the nighttime E0 of a year without one from the nearest year
    (the central run's choice), for a u* scenario. The central run lets one method
    that cannot fit be NaN and tries the nearest year's E0 only where the plain fit
    fails (:mod:`fluxpart.method_failure`). Returns the outcome and the errors of
    the methods that could not fit.
    """
    too_calm = screening.low_ustar(screened["ustar"].to_numpy(), is_night, threshold)
    nee_measured = np.where(too_calm, np.nan, screened["nee"].to_numpy())
    if central_fill is not None and config.gapfill_donors == "separate_day_night":
        # the u* filter removes night records only, and day gaps take day donors only:
        # the day records of every u* scenario are those of the central fill
        night_fill = _fill_nee(nee_measured, conditions, frame.index, is_night, config,
                               gaps=is_night)
        filled = pd.DataFrame({column: np.where(is_night, night_fill[column].to_numpy(),
                                                central_fill[column].to_numpy())
                               for column in night_fill.columns}, index=night_fill.index)
    else:
        filled = _fill_nee(nee_measured, conditions, frame.index, is_night, config)
    temperature_filled = _respiration_temperature(filled_drivers, temperature, delay, True)

    def fit_nighttime(borrow):
        if night_fit is not None:
            return nighttime.apply_fit(night_fit, filled["value"].to_numpy(), temperature_filled)
        return nighttime.partition_nighttime(
            frame.index, nee_measured, filled["value"].to_numpy(),
            _respiration_temperature(screened, temperature, delay), temperature_filled,
            is_night, respiration_driver=temperature,
            **_nighttime_settings(config, screened["rg"].to_numpy(dtype=float), frame.index,
                                  borrow))

    central = central_fill is None
    night, day, errors = method_failure.partition_both(
        (lambda: method_failure.first_fit(fit_nighttime)) if central
        else (lambda: fit_nighttime(nearest_year)),
        lambda night: _fit_daytime(frame, nee_measured, screened, filled_drivers,
                                   temperature_filled, is_night, config, curvature, night),
        len(frame), temperature, skip=skip, degrade=central)
    return too_calm, nee_measured, filled, night, day, errors


def _fallback_e0_text(parameters, fell_back, e0_annual) -> str:
    """The E0 the daytime windows without their own took (`_fit_daytime`: the median of
    the nighttime method's per-record E0), named with each calendar year's E0 where the
    record has several: the median of a record's records can be a value no year has."""
    value = float(parameters.loc[fell_back.to_numpy(), "e0"].iloc[0])
    years = e0_annual.dropna(subset=["e0"]) if "e0" in getattr(e0_annual, "columns", ()) \
        else None
    if years is None or len(years) < 2:
        return f"the nighttime method's E0 ({value:.0f} K)"
    listed = ", ".join(f"{int(year)}: {float(e0):.0f} K"
                       for year, e0 in years["e0"].items())
    return (f"the median over the record of the nighttime method's E0 ({value:.0f} K; "
            f"calendar years {listed})")


def _fit_daytime(frame, nee_measured, screened, filled_drivers, temperature_filled, is_night,
                 config, curvature, night):
    """The daytime method with the configured settings (`night`: the nighttime result)."""
    # the daytime method estimates E0 from its own night windows; where none has the
    # temperature range for it (e.g. a damped soil temperature), the nighttime method's
    # E0 stands in, flagged "fallback" in the daytime parameter table and warned about
    day_e0_fallback = config.e0_fallback
    if day_e0_fallback is None and np.isfinite(night.e0).any():
        day_e0_fallback = float(np.nanmedian(night.e0))
    return daytime.partition_daytime(
        frame.index, nee_measured, filled_drivers["rg_filled"].to_numpy(),
        filled_drivers["vpd_filled"].to_numpy(), temperature_filled, is_night,
        random_error=_daytime_error_model(frame.index, nee_measured, screened, config),
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
        curvature=curvature, **_event_cut(frame.index, config))


def _daytime_error_model(index, nee_measured, screened, config):
    """σ(NEE) of the random-error model for weighting the daytime fit, or None (unweighted)."""
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
    config = _config(config)
    if not isinstance(site, Site):
        raise ConfigError(f"site must be a fluxpart.Site, got {type(site).__name__}")
    load_blas_libraries()       # now, while memory is free (fingerprint.load_blas_libraries)
    # variables a site config's [input] accept_units kept as they are (a frame of the reader)
    accepted = tuple(getattr(frame, "attrs", {}).get("accept_units", ()))
    frame, notes = _prepare(frame, site)
    interval = _validate(frame)
    frame, edges = _budget_record(frame, config, interval)
    frame = frame.copy()
    frame.index = frame.index.rename("time")
    temperature = _temperature(config, frame)
    warnings = [f"input: {text}" for text in [*(provenance or {}).get("reader", {}).get(
        "warnings", []), *notes]] + [f"budget year: {text}" for text in edges]
    warnings.extend(gapfill.event_notes(frame.index, config.events))

    def step(label: str) -> None:
        _LOG.info("%s: %s", site.name, label)     # the standard logging route (silent by default)
        if progress is not None:
            progress(label)

    geometry, is_night, screens = _geometry_and_screening(frame, site, config, interval)
    screened = screens.screened
    if "reader" not in (provenance or {}):      # a caller's frame: no reader checked its units
        refusal = unit_checks.frame_refusal(frame, interval, accept_units=accepted)
        if refusal:
            raise ImplausibleValueError(f"input: {refusal}")
        warnings.extend(f"input: {text}" for text in unit_checks.frame_messages(
            frame, geometry["potential_radiation"].to_numpy(), interval, accept_units=accepted))
    verdict, findings = _clock_and_preflight(frame, site, config, interval, geometry, is_night,
                                             screens, (provenance or {}).get("reader"))
    _refuse(verdict, findings, config)
    if verdict is not None:
        warnings.extend(verdict.problems)
    warnings.extend(str(f) for f in findings if f.stage not in ("u* threshold", "annual budget"))
    clock_record = ({"setting": "off", "status": "not_checked"} if verdict is None
                    else {"setting": config.clock_check, **verdict.to_dict()})
    step("screened")

    ustar_table, ustar_draws, central, scenario_thresholds = _ustar_thresholds(
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

    year_runs = {"central": _per_record(frame.index, central),
                 **{name: _per_record(frame.index, values)
                    for name, values in scenario_thresholds.items()}}
    contrast = ustar_seasonal.seasonal_contrast(ustar_table)
    runs = ustar_seasonal.threshold_runs(frame.index, site.latitude, ustar_table, year_runs,
                                         contrast, config.ustar_distinct_seasons)
    warnings.extend(ustar_seasonal.contrast_warnings(contrast, config.ustar_distinct_seasons))
    forced = _forced_temperature_note(temperature, frame.index, screened, is_night,
                                      runs["central"], config)
    warnings.extend([forced] if forced else [])
    temperature, choice = _chosen_temperature(temperature, frame.index, screened, is_night,
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
        return _threshold_runs((frame, screened_now, filled_drivers, conditions, is_night),
                               runs, temperature, config, night_fits.get(temperature), delay,
                               notes, report, year_keys), notes

    # a partitioning error names the uptake in the dark preflight found (night_uptake)
    with night_uptake.named_in_failure(findings):
        outcomes, run_warnings = all_runs(screened, step)
        # the release of CO2 stored on calm nights, seen in the mornings after them
        # (storage_check); where it shows, those mornings are excluded and the runs redone
        outcomes, run_warnings, screened, released, release_notes = _storage_release(
            outcomes, run_warnings, screened, all_runs, frame["ustar"].to_numpy(dtype=float),
            runs["central"], is_night, year_keys, interval, config.storage_release)
    warnings.extend(run_warnings)
    warnings.extend(release_notes)

    # the nighttime method's central Reco averaged over the two respiration forms; the
    # same per-record shift in every u* run keeps their spread the threshold's alone
    form = _respiration_form(frame, filled_drivers, outcomes["central"], is_night, temperature,
                             config, delay)
    outcomes = {name: (*outcome[:3], _shifted(outcome[3], form.shift), outcome[4])
                for name, outcome in outcomes.items()}
    too_calm, nee_measured, filled, night, day = outcomes["central"]
    warnings.extend(gapfill.crossed_event_notes(frame.index, config.events,
                                                filled.attrs.pop("events_crossed", [])))
    if config.events:
        warnings.extend(pieces.window_notes(frame.index, gapfill.event_breaks(
            frame.index, config.events), night.rref_windows, day.parameters))
    day_evidence = _daytime_driver_evidence(frame, screened, filled_drivers,
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
            f"{_fallback_e0_text(day.parameters, fell_back, night.e0_annual)} was used there, "
            "flagged 'fallback' in the daytime parameter table, so the two methods are not "
            "independent in their E0")
    flags = screens.flags.assign(nee_low_ustar=too_calm, nee_morning_release=released)
    reason = screens.reason.to_numpy().copy()
    reason[(reason == 0) & too_calm] = _REASON_LOW_USTAR
    reason[(reason == 0) & released] = _REASON_MORNING_RELEASE
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

    budgets = budget.aggregate(timeseries, interval, fluxes=_BUDGET_FLUXES,
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
    annual = _scenario_spread(annual, outcomes, frame.index, interval, year_keys)

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
    daily, monthly, annual, gapfill_model, driver_notes = _uncertainty(
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
    counts[screening.REASON_CODES[_REASON_LOW_USTAR]] = int((reason == _REASON_LOW_USTAR).sum())
    counts[screening.REASON_CODES[_REASON_MORNING_RELEASE]] = int(
        (reason == _REASON_MORNING_RELEASE).sum())
    counts[screening.REASON_CODES[0]] = int((reason == 0).sum())
    warnings.extend(budget_warnings.budget_year_warnings(
        annual, timeseries, year_keys, interval, config, list(_BUDGET_FLUXES.values()),
        unfitted))
    for text in warnings:
        _warnings.warn(text, FluxpartWarning, stacklevel=2)
    facts = schema.file_metadata(site, interval)
    parameters = {"nighttime_e0": night.e0_windows, "nighttime_e0_annual": night.e0_annual,
                  "nighttime_rref": night.rref_windows, "daytime": day.parameters,
                  "ustar_bootstrap": ustar_draws, **parameters}
    return Result(
        site=site, config=config,
        timeseries=schema.with_metadata(_labelled(timeseries), "timeseries", facts),
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


def _threshold_runs(arguments, runs, temperature, config, night_fit, delay, warnings, step,
                    year_keys=()):
    """Fill and partition at each u* run's thresholds; the outcomes by run name.

    The central run comes first (it may reuse `night_fit`, the temperature choice's
    nighttime fit on the same measured NEE); the scenarios share its NEE fill of the
    day records and its light-response curvature. A scenario with too little data is
    left out with a warning appended to `warnings`. A method the central run could not
    fit is NaN in every run, named in `warnings` with the budget years `year_keys`.
    """
    outcomes = {}
    curvature = config.daytime_curvature
    skip, borrowed = (), False
    for name, threshold in runs.items():
        try:
            *outcome, errors = _fill_and_partition(
                *arguments, threshold, temperature, config, curvature,
                night_fit if name == "central" else None,
                None if name == "central" else outcomes["central"][2], delay, skip, borrowed)
            outcomes[name] = tuple(outcome)
            if name == "central":
                skip = tuple(errors)
                borrowed = method_failure.borrowed_e0(outcome[3])
                warnings.extend(nighttime.nearest_year_notes(outcome[3].e0_annual, temperature))
                warnings.extend(method_failure.failure_warning(method, np.unique(year_keys),
                                                               error)
                                for method, error in errors.items())
            if name == "central" and "daytime" not in skip:
                # the u* scenarios keep the central run's light-response curvature, so
                # that their spread is the u* threshold's alone
                day_parameters = outcomes["central"][4].parameters
                curvature = float(day_parameters["curvature"].iloc[0])
        except InsufficientDataError as error:
            if name == "central":
                raise
            # a higher u* threshold can leave too few night records for a method: that
            # scenario is left out of the u* part (computed from the runs that remain)
            warnings.append(f"u* scenario {name} not computed ({error}); the u* part of the "
                            "uncertainty uses the remaining runs")
        if name not in ("ustar_seasonal", "ustar_year"):     # runs stage_count cannot foresee
            step(f"gap filling and partitioning ({name})")
    return outcomes


def _storage_release(outcomes, run_warnings, screened, rerun, ustar, threshold, is_night,
                     year_keys, interval, mode):
    """Exclude the mornings after calm nights where their release of stored CO2 shows.

    Stage by stage (:data:`fluxpart.storage_check.CALM_SHARES`: the nights at least half
    calm, then, in the years that stage flagged, the nights with any calm record), the
    mornings after such nights are compared with the others
    (:func:`fluxpart.storage_check.morning_release`); where the excess is flagged and
    `mode` is ``"exclude"``, they are excluded from the measured NEE and ``rerun(screened)``
    redoes the u* runs (returning their outcomes and warnings). Returns the outcomes and
    their warnings, the screened record, the excluded records (bool) and the warnings
    that name the release.
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


def _respiration_form(frame, filled_drivers, central, is_night, temperature, config, delay=0):
    """Both respiration forms' nighttime Reco on the central run, averaged as configured."""
    _, nee_measured, filled, night, _ = central
    try:
        if method_failure.failed(night):
            raise InsufficientDataError("the nighttime method could not fit")
        exponential = respiration_form.exponential_reco(
            frame.index, nee_measured, filled["value"].to_numpy(dtype=float),
            _respiration_temperature(frame, temperature, delay),
            _respiration_temperature(filled_drivers, temperature, delay, True), is_night,
            respiration_driver=temperature,
            **_nighttime_settings(config, frame["rg"].to_numpy(dtype=float), frame.index,
                                  method_failure.borrowed_e0(night)))
    except FluxpartError:
        exponential = None
    weight = 0.0 if exponential is None else uncertainty.driver_weight(
        nee_measured, is_night, night.reco, exponential)
    return respiration_form.average_forms(night.reco, exponential, weight,
                                          config.respiration_form)


def _shifted(night, shift):
    """A nighttime result with `shift` [µmol m-2 s-1] added to its Reco and GPP."""
    if not np.any(shift):
        return night
    return dataclasses.replace(night, reco=night.reco + shift, gpp=night.gpp + shift)


def _uncertainty(daily, monthly, annual, timeseries, outcomes, sigma, conditions, is_night,
                 night, day, temperature, interval, config, year_keys, night_fits,
                 error_model=None, form=None, delay=0, day_evidence=None):
    """1-sigma columns of the daily and monthly tables, the annual budget and 95 % intervals.

    `night_fits`: nighttime fits on the central measured NEE and the input's temperature
    columns (by driver), reused for the other driver's Reco. `day_evidence`: (statistic,
    other temperature's name) of :func:`_daytime_driver_evidence`, or None. Also returns
    the warning of a temperature choice the daytime records contradict (a list).
    """
    index = timeseries.index
    nee_measured = timeseries["nee_measured"].to_numpy(dtype=float)
    measured = np.isfinite(nee_measured)
    noise = np.where(measured, sigma, 0.0)
    # only the held-out records are scored, so only they are filled (the same fills);
    # each artificial gap hides the drivers its real gap lacked
    gap_errors = uncertainty.artificial_gap_errors(
        nee_measured, noise, is_night,
        lambda values, hidden: _fill_nee(values, conditions.mask(hidden), index, is_night,
                                         config, gaps=measured & np.isnan(values),
                                         values_only=True),
        seed=uncertainty.artificial_gap_seed(nee_measured), records_per_day=24 * 60 // interval,
        conditions_missing=conditions.isna().to_numpy())
    gapfill_model = uncertainty.gapfill_error_model(gap_errors)
    # each long gap filled from one side only: a change of the canopy within it
    sides = gap_sides.one_sided_fills(
        nee_measured, *gap_sides.long_gaps(~measured, 24 * 60 // interval,
                                           breaks=gapfill.event_breaks(index, config.events)),
        lambda values, gaps: _fill_nee(values, conditions, index, is_night, config,
                                       gaps=gaps, values_only=True))
    runs = {name: pd.DataFrame({"nee": filled["value"].to_numpy(), "gpp_nighttime": n.gpp,
                                "reco_nighttime": n.reco, "gpp_daytime": d.gpp,
                                "reco_daytime": d.reco}, index=index)
            for name, (_, _, filled, n, d) in outcomes.items()}
    nee_filled = timeseries["nee_filled"].to_numpy(dtype=float)
    settings = _nighttime_settings(config, timeseries["rg"].to_numpy(dtype=float), index,
                                   method_failure.borrowed_e0(night))

    def refit(fit, driver):
        """Reco of `fit` (partition_nighttime's arguments) on `driver`; None if it fails."""
        try:
            return fit(index, nee_measured, nee_filled, timeseries[driver].to_numpy(dtype=float),
                       timeseries[f"{driver}_filled"].to_numpy(dtype=float), is_night,
                       respiration_driver=driver, **settings)
        except FluxpartError:
            return None

    other = _OTHER_TEMPERATURE[temperature]
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
        _respiration_temperature(timeseries, temperature, delay, True), night, day.parameters,
        gapfill_model, rref_window_days=config.rref_window_days, other_driver_reco=other_reco,
        nee_measured=nee_measured,
        fill_window_days=timeseries["nee_fill_window_days"].to_numpy(dtype=float),
        fill_noise_sigma=None if error_model is None else error_model.predict(
            timeseries["nee_filled"].to_numpy(dtype=float)), respiration_form=form,
        day_driver_statistic=None if day_evidence is None else day_evidence[0],
        day_evidence_critical=temperature_choice.DAYTIME_EVIDENCE_Z,
        fill_sides=sides, daytime_result=day,
        **_event_cut(index, config))
    notes = []
    if (other_reco is not None and day_evidence is not None and inputs.driver_weight == 0.5
            and abs(day_evidence[0]) > temperature_choice.DAYTIME_EVIDENCE_Z):
        central = f"{temperature} delayed by {delay * interval / 60:g} h" if delay else temperature
        notes.append(temperature_choice.conflict_note(central, day_evidence[1],
                                                      day_evidence[0]))
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


def _daytime_driver_evidence(frame, screened, filled_drivers, central, is_night, temperature,
                             delay, config):
    """The daytime records' evidence on the respiration temperature, or None.

    The daytime method fitted again with the other temperature (undelayed air
    temperature for a delayed one) and the central run's light-response curvature;
    returns (:func:`temperature_choice.daytime_evidence`, the other temperature's name).
    """
    _, nee_measured, _, night, day = central
    if method_failure.failed(day) or method_failure.failed(night):
        return None
    other = "tair" if delay else _OTHER_TEMPERATURE[temperature]
    if f"{other}_filled" not in filled_drivers.columns:
        return None
    other_filled = _respiration_temperature(filled_drivers, other, 0, True)
    if not np.isfinite(other_filled).any():
        return None
    try:
        other_day = _fit_daytime(frame, nee_measured, screened, filled_drivers, other_filled,
                                 is_night, config, float(day.parameters["curvature"].iloc[0]),
                                 night)
    except FluxpartError:
        return None
    statistic = temperature_choice.daytime_evidence(
        nee_measured, ~np.asarray(is_night, dtype=bool), day.reco - day.gpp,
        other_day.reco - other_day.gpp, frame.index.normalize())
    return statistic, other


def _scenario_spread(annual, outcomes, index, interval, year_keys) -> pd.DataFrame:
    """Budget-year sums of each u* scenario and their spread (max - min) [g C m-2]."""
    if len(outcomes) == 1:
        return annual
    sums = {}
    for name, (_, _, filled, night, day) in outcomes.items():
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
