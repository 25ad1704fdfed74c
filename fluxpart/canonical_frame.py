"""The caller's record brought to the canonical form and validated once, before any stage.

What :func:`fluxpart.pipeline.process` (and ``check``'s :func:`~fluxpart.pipeline.check_record`
and :func:`~fluxpart.pipeline.screening_summary`) do first: the settings or the published
defaults, a tz-aware index converted to local standard time, columns that are not canonical
variables left out, numbers as float64 (infinities missing), the required columns and the
regular 30- or 60-minute spacing checked, and the record fitted to its budget years
(:func:`fluxpart.budget_calendar.budget_year_edges`). Pure functions over DataFrames; each
refusal names the column, row or setting.
"""

from __future__ import annotations

import datetime
from typing import NamedTuple

import numpy as np
import pandas as pd

from . import budget_calendar, frame_stamps, gapfill
from ._validate import unique_columns
from .config import Config
from .errors import ConfigError, FluxpartError, MissingColumnError, SpacingError
from .site import Site
from .variables import REQUIRED, VARIABLES
from .year_start_season import day_first_year_start, split_growing_season

_NOT_STAMPED = ("the frame's index must be a DatetimeIndex of interval starts (local standard "
                "time), got ")


def checked_config(config) -> Config:
    """The settings given, or the published defaults; anything else is refused.

    Parameters
    ----------
    config : Config or None
        The caller's settings.

    Returns
    -------
    Config
        `config`, or ``Config()`` where it is None.

    Raises
    ------
    ConfigError
        If `config` is neither None nor a :class:`~fluxpart.config.Config`.
    """
    if config is None:
        return Config()
    if not isinstance(config, Config):
        raise ConfigError(f"config must be a fluxpart.Config, got {type(config).__name__}; "
                          "build one with fluxpart.Config(seed=1, ...) or "
                          "fluxpart.Config.from_toml(path)")
    return config


def require_columns(frame: pd.DataFrame) -> None:
    """Refuse a frame without the required columns, naming the columns it has.

    Parameters
    ----------
    frame : pandas.DataFrame
        The caller's record, canonical column names (``nee``, ``rg``, ...).

    Raises
    ------
    MissingColumnError
        If a required column is missing (a case-only difference and a ``vpd`` that
        ``rh`` and ``tair`` give named), a name is repeated, or the labels have several
        levels.
    """
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


def validate(frame: pd.DataFrame) -> int:
    """Check the canonical frame once; return its interval.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical record (:func:`prepare`'s output) on a tz-naive DatetimeIndex of
        interval starts.

    Returns
    -------
    int
        The record interval, 30 or 60 [minutes].

    Raises
    ------
    FluxpartError
        (a subclass) naming the column or row: not a DataFrame, no DatetimeIndex, a
        tz-aware index, a required column missing or empty, a non-numeric column,
        stamps not strictly increasing or not regularly 30 or 60 minutes apart.
    """
    if not isinstance(frame, pd.DataFrame):
        raise FluxpartError(f"process() needs a pandas DataFrame, got {type(frame).__name__}")
    if not isinstance(frame.index, pd.DatetimeIndex):
        raise SpacingError(_NOT_STAMPED + f"{type(frame.index).__name__}"
                           + frame_stamps.index_hint(frame))
    if frame.index.tz is not None:
        raise SpacingError(f"the frame's index carries the time zone {frame.index.tz}; use "
                           "tz-naive local standard time and give Site.utc_offset")
    require_columns(frame)
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
                           f"({frame.index[row]})" + frame_stamps.order_hint(frame.index, row))
    if not (steps == steps[0]).all() or steps[0] not in (1800, 3600):
        row = int(np.flatnonzero(steps != steps[0])[0]) + 1 if not (steps == steps[0]).all() else 1
        raise SpacingError(f"records must be regularly spaced by 30 or 60 minutes (insert NaN "
                           f"rows for missing stamps); found a step of "
                           f"{steps[min(row, len(steps)) - 1] / 60:g} minutes at row {row}")
    return int(steps[0] // 60)


def prepare(frame, site: Site) -> tuple:
    """Bring a caller's frame to the canonical form; return it and notes on what changed.

    A tz-aware index is converted to the site's local standard time (UTC +
    ``site.utc_offset``, no daylight saving) and made tz-naive; columns that are not
    canonical variables are left out; numeric columns become float64 (missing values
    and infinities NaN). The caller's frame is not modified.

    Parameters
    ----------
    frame : pandas.DataFrame
        The caller's record (anything else is returned as given, for :func:`validate`
        to refuse).
    site : Site
        The tower; its ``utc_offset`` [hours] converts a tz-aware index.

    Returns
    -------
    frame : pandas.DataFrame
        The canonical record.
    notes : list of str
        Warnings on what was changed (time zone, columns left out, infinities).

    Raises
    ------
    SpacingError
        If the index is not a DatetimeIndex: before the other columns are left out, so
        that a column holding the stamps is named (:func:`fluxpart.frame_stamps.index_hint`).
    """
    notes = []
    if not isinstance(frame, pd.DataFrame):
        return frame, notes
    if isinstance(frame.index, pd.DatetimeIndex) and frame.index.tz is not None:
        zone = datetime.timezone(datetime.timedelta(hours=site.utc_offset))
        notes.append(f"the index carried the time zone {frame.index.tz}; converted to local "
                     f"standard time UTC{site.utc_offset:+g} h (Site.utc_offset)")
        frame = frame.set_axis(frame.index.tz_convert(zone).tz_localize(None), axis=0)
    require_columns(frame)        # before other columns are left out: name them all
    if not isinstance(frame.index, pd.DatetimeIndex):
        raise SpacingError(_NOT_STAMPED + f"{type(frame.index).__name__}"
                           + frame_stamps.index_hint(frame))   # a column of stamps named
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


def budget_record(frame: pd.DataFrame, config: Config, interval: int) -> tuple:
    """The frame on its budget years (:func:`fluxpart.budget_calendar.budget_year_edges`).

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical, validated record.
    config : Config
        Settings; ``year_start`` (``"MM-DD"``) opens each budget year.
    interval : int
        Record interval [minutes].

    Returns
    -------
    frame : pandas.DataFrame
        The record with a budget year's fragment of less than a day left out and up to
        a day absent at a year's edges added as empty records (the same object where
        neither applies).
    notes : list of str
        Warnings saying so.
    """
    index, notes = budget_calendar.budget_year_edges(frame.index, interval, config.year_start)
    return (frame.reindex(index) if notes else frame), notes


def respiration_setting(config: Config, frame: pd.DataFrame) -> str:
    """The ``respiration_driver`` setting, checked against the record's columns.

    Parameters
    ----------
    config : Config
        Settings; ``respiration_driver`` is ``"auto"``, ``"tair"`` or ``"tsoil"``.
    frame : pandas.DataFrame
        Canonical record.

    Returns
    -------
    str
        ``config.respiration_driver`` as set.

    Raises
    ------
    ConfigError
        If a set temperature has no column or no value in the record.
    """
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


class RunRecord(NamedTuple):
    """The record a run works on, and what preparing it said.

    Attributes
    ----------
    frame : pandas.DataFrame
        Canonical variables as float64 on the budget years, the index named ``time``.
    interval : int
        Record interval [minutes].
    temperature : str
        ``respiration_driver`` as set (``"auto"``, ``"tair"`` or ``"tsoil"``).
    accepted : tuple of str
        Variables a site config's ``[input] accept_units`` kept as they are.
    warnings : list of str
        The reader's and the preparation's notes, the budget years' edges and the
        events outside the record, in this order.
    """

    frame: pd.DataFrame
    interval: int
    temperature: str
    accepted: tuple
    warnings: list


def run_record(frame, site: Site, config: Config, provenance: dict | None) -> RunRecord:
    """Prepare and validate a caller's frame once (the first stage of a run).

    Parameters
    ----------
    frame : pandas.DataFrame
        The caller's record (:func:`fluxpart.pipeline.process`); not modified.
    site : Site
        The tower (its ``utc_offset`` for a tz-aware index).
    config : Config
        Settings (``year_start``, ``respiration_driver``, ``events``).
    provenance : dict or None
        The run's provenance; its ``reader`` record's warnings come first.

    Returns
    -------
    RunRecord
    """
    # variables a site config's [input] accept_units kept as they are (a frame of the reader)
    accepted = tuple(getattr(frame, "attrs", {}).get("accept_units", ()))
    frame, notes = prepare(frame, site)
    interval = validate(frame)
    frame, edges = budget_record(frame, config, interval)
    frame = frame.copy()
    frame.index = frame.index.rename("time")
    temperature = respiration_setting(config, frame)
    warnings = [f"input: {text}" for text in [*(provenance or {}).get("reader", {}).get(
        "warnings", []), *notes]] + [f"budget year: {text}" for text in edges]
    warnings.extend(gapfill.event_notes(frame.index, config.events))
    # a year start written day first (round mistakes54)
    order = day_first_year_start(config.year_start)
    warnings.extend([f"budget year: {order}"] if order else [])
    if "nee" in frame.columns:
        # a budget year opened inside the growing season (round mistakes41)
        season = split_growing_season(config.year_start, frame["nee"].to_numpy(dtype=float),
                                      frame.index, site.latitude, Config().year_start)
        warnings.extend([f"budget year: {season}"] if season else [])
    return RunRecord(frame, interval, temperature, accepted, warnings)
