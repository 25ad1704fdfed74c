"""The u* threshold stage: the threshold per year, its bootstrap and the scenario thresholds.

The detector of :mod:`fluxpart.ustar` run with the configured settings (or the fixed
``ustar_threshold``), years without a threshold given the nearest year's, and the
per-record thresholds of the u* runs (:func:`per_record`).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from . import settings_notes, ustar, ustar_fixed, ustar_seasonal, ustar_trend
from .config import Config


def ustar_thresholds(frame, screened, is_night, site, config):
    """The u* threshold of each year, its bootstrap draws and the scenario thresholds.

    The central threshold of a year is the detector's value on the data; a year
    without one takes the nearest year's (:func:`fluxpart.ustar.nearest_detected_year`,
    source ``nearest_year``) and the fixed ``ustar_threshold`` only where no year has
    one (source ``fallback``). Scenario thresholds are the bootstrap percentiles named
    in ``ustar_scenarios``.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record (its index: the years).
    screened : pandas.DataFrame
        The screened record: ``nee`` [µmol m-2 s-1], ``ustar`` [m s-1], ``tair`` [°C].
    is_night : numpy.ndarray of bool
        The night mask.
    site : Site
        The tower (latitude for the seasons, canopy for the u* floor).
    config : Config
        Settings (``ustar_method``, ``ustar_threshold`` [m s-1], bootstrap and classes).

    Returns
    -------
    table : pandas.DataFrame
        The u* table per year and season with its source (:attr:`Result.ustar`).
    draws : pandas.DataFrame
        The bootstrap thresholds (empty for a fixed threshold).
    central : pandas.Series
        The threshold of each year [m s-1].
    scenarios : dict of str to pandas.Series
        ``ustar_pXX``: each scenario's threshold per year [m s-1].

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
    Exchange measured with eddy covariance technique. Biogeosciences 3, 571-583.
    Barr, A. G. et al. (2013). Use of change-point detection for friction-velocity
    threshold evaluation in eddy-covariance studies. Agricultural and Forest
    Meteorology 171-172, 31-45.
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


def per_record(index, per_year: pd.Series) -> np.ndarray:
    """A per-year value at each record of `index`.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The record's stamps.
    per_year : pandas.Series
        Values by calendar year (a u* threshold [m s-1]).

    Returns
    -------
    numpy.ndarray
        The value of each record's year (NaN for a year without one).
    """
    return per_year.reindex(index.year).to_numpy(dtype=float)


class UstarStage(NamedTuple):
    """The u* thresholds a run uses.

    Attributes
    ----------
    table : pandas.DataFrame
        The u* table (:attr:`fluxpart.result.Result.ustar`).
    draws : pandas.DataFrame
        The bootstrap thresholds (empty for a fixed threshold).
    central : pandas.Series
        The threshold of each calendar year [m s-1].
    scenarios : dict of str to pandas.Series
        Each u* scenario's threshold per year [m s-1].
    warnings : list of str
        Where thresholds came from, unused or too low a fixed threshold, settings the
        method never reads.
    """

    table: pd.DataFrame
    draws: pd.DataFrame
    central: pd.Series
    scenarios: dict
    warnings: list


def threshold_stage(frame, screened, is_night, site, config,
                    potential_radiation=None) -> UstarStage:
    """The u* thresholds (:func:`ustar_thresholds`) and the warnings about them.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record.
    screened : pandas.DataFrame
        The screened record (``nee`` [µmol m-2 s-1], ``ustar`` [m s-1], ``tair`` [°C]).
    is_night : numpy.ndarray of bool
        The night mask.
    site : Site
        The tower (latitude, canopy).
    config : Config
        Settings.
    potential_radiation : numpy.ndarray, optional
        Potential radiation [W m-2]: with ``ustar_kept_trend = "raise"`` the trend test
        reads the night records in darkness only (the sun below the horizon), so that
        twilight uptake does not enter it; all night records where None.

    Returns
    -------
    UstarStage

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
    Exchange measured with eddy covariance technique. Biogeosciences 3, 571-583.
    """
    table, draws, central, scenarios = ustar_thresholds(frame, screened, is_night, site, config)
    raises = {}
    if config.ustar_kept_trend == "raise" and config.ustar_method != "fixed":
        # night NEE still rising with u* above the threshold: raised (round nightbias52)
        dark = np.asarray(is_night, dtype=bool)
        if potential_radiation is not None:
            # twilight records with some uptake left out, as run_inputs' sun_up
            dark = dark & ~(np.asarray(potential_radiation, dtype=float) > 1e-6)
        raises = ustar_trend.yearly_factors(
            frame.index, screened["nee"].to_numpy(dtype=float),
            screened["ustar"].to_numpy(dtype=float), screened["tair"].to_numpy(dtype=float),
            dark, central, config.ustar_temperature_classes, config.ustar_classes)
        table, central, scenarios = ustar_trend.raised(table, central, scenarios, raises)
    warnings = list(ustar.source_notes(table, config.ustar_threshold))
    warnings.extend(ustar_trend.raise_notes(raises))
    unused = ustar.unused_threshold_note(table, config.ustar_threshold,
                                         config.ustar_method, Config().ustar_threshold)
    warnings.extend([unused] if unused else [])
    warnings.extend(threshold_setting_notes(frame, screened, is_night, site, config))
    warnings.extend(settings_notes.ignored_settings(config))
    return UstarStage(table, draws, central, scenarios, warnings)


def threshold_setting_notes(frame, screened, is_night, site, config) -> list:
    """Warnings where a set u* threshold or floor disagrees with the night records.

    A fixed `ustar_threshold` the night records reject as too low or far too high, and a
    `ustar_min_threshold` far above the threshold detected under the canopy's own floor
    (:mod:`fluxpart.ustar_fixed`). ``fluxpart check`` lists them as ``run`` warns them.

    Parameters
    ----------
    frame, screened, is_night, site, config
        As for :func:`threshold_stage`.

    Returns
    -------
    list of str
        Empty where the settings agree with the records (or set no threshold or floor).
    """
    notes = []
    if config.ustar_method == "fixed":
        # a fixed threshold the night records reject as too low (round mistakes24)
        low = ustar_fixed.fixed_threshold_note(
            frame.index, screened["nee"].to_numpy(), screened["ustar"].to_numpy(),
            screened["tair"].to_numpy(), is_night, site.latitude, config.ustar_threshold,
            config, ustar.CANOPY_FLOORS[site.canopy] if config.ustar_min_threshold is None
            else config.ustar_min_threshold)
        notes.extend([low] if low else [])
    # a floor far above the night records' threshold (round mistakes43)
    high_floor = ustar_fixed.floor_far_above_note(
        frame.index, screened["nee"].to_numpy(), screened["ustar"].to_numpy(),
        screened["tair"].to_numpy(), is_night, site.latitude, config,
        ustar.CANOPY_FLOORS[site.canopy])
    notes.extend([high_floor] if high_floor else [])
    return notes


class RecordRuns(NamedTuple):
    """The per-record thresholds of each u* run.

    Attributes
    ----------
    year_runs : dict of str to numpy.ndarray
        The central and scenario thresholds of each record's year [m s-1].
    runs : dict of str to numpy.ndarray
        The runs done: ``year_runs`` with seasons' own thresholds where they clearly
        differ (and the year's as an extra run; :mod:`fluxpart.ustar_seasonal`).
    warnings : list of str
        The seasonal contrast's notes.
    """

    year_runs: dict
    runs: dict
    warnings: list


def record_runs(index, latitude, stage: UstarStage, config) -> RecordRuns:
    """The thresholds of every u* run per record.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The record's stamps.
    latitude : float
        Site latitude [degrees north] (the seasons' hemisphere).
    stage : UstarStage
        The thresholds per year.
    config : Config
        Settings (``ustar_distinct_seasons``).

    Returns
    -------
    RecordRuns
    """
    year_runs = {"central": per_record(index, stage.central),
                 **{name: per_record(index, values)
                    for name, values in stage.scenarios.items()}}
    contrast = ustar_seasonal.seasonal_contrast(stage.table)
    runs = ustar_seasonal.threshold_runs(index, latitude, stage.table, year_runs,
                                         contrast, config.ustar_distinct_seasons)
    return RecordRuns(year_runs, runs, list(ustar_seasonal.contrast_warnings(
        contrast, config.ustar_distinct_seasons)))
