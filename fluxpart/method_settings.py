"""The configured settings of the method calls that several stages make alike.

The NEE gap fill by marginal distribution sampling (:func:`fill_nee`, the central
fill, the u* scenarios' fills, the artificial gaps and the one-sided fills of long
gaps), the nighttime method's keyword settings, the events' breaks of the
partitioning windows and the respiration temperature series: one place, so that
every stage calls the methods with the same :class:`~fluxpart.config.Config`.
"""

from __future__ import annotations

import numpy as np

from . import gapfill, preceding_light
from .partition import temperature_choice

#: ``Config.gapfill_donors`` value: separate day and night donors, and a night gap in
#: darkness filled from dark night records first (:func:`fluxpart.gapfill.fill_marginal`'s
#: ``sun_up``).
DARK_FIRST = "dark_first"

#: ``Config.night_fit_records`` value: the nighttime fits use records with the sun down.
SUN_DOWN = "sun_down"

#: The respiration temperature a run does not use, of the one it uses.
OTHER_TEMPERATURE = {"tair": "tsoil", "tsoil": "tair"}


def night_light_tested(config) -> bool:
    """Whether the NEE fills are to test and take the preceding day's light.

    Only the local-linear estimate of separate night donors moves a night fill by a
    regressor (:func:`fluxpart.gapfill.fill_marginal`); with ``gapfill_estimate =
    "donor_mean"`` or ``gapfill_donors = "similar_conditions_only"`` the column would act
    on nothing, yet its yearly tests would stand in the provenance as if it had.

    Parameters
    ----------
    config : Config
        Settings (``gapfill_night_light``, ``gapfill_estimate``, ``gapfill_donors``).

    Returns
    -------
    bool
        True where ``gapfill_night_light = "tested"`` and the fills can take it.

    References
    ----------
    Reichstein, M. et al. (2005), Appendix A (marginal distribution sampling: its separate
    night donors, which the local-linear estimate of this project refines).
    """
    return (config.gapfill_night_light == "tested"
            and config.gapfill_estimate == "local_linear"
            and config.gapfill_donors != "similar_conditions_only")


def fill_nee(nee_measured, conditions, index, is_night, config, gaps=None, values_only=False,
             sun_up=None, evening=None):
    """MDS gap filling of NEE with the configured settings (also scored on artificial gaps).

    Parameters
    ----------
    nee_measured : numpy.ndarray
        Measured NEE [µmol m-2 s-1], NaN where rejected or missing.
    conditions : pandas.DataFrame
        The drivers compared (``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa], ...; a
        ``clearness`` column where ``gapfill_clearness_tolerance`` is set; the preceding
        day's light where ``gapfill_night_light = "tested"``, kept in the years whose
        measured nights show it, :func:`fluxpart.preceding_light.gated_conditions`).
    index : pandas.DatetimeIndex
        The record's stamps.
    is_night : numpy.ndarray of bool
        The night mask.
    config : Config
        Settings (tolerances, windows, donors, events).
    gaps : numpy.ndarray of bool, optional
        The records to fill (default: every missing one).
    values_only : bool, optional
        The filled values as an array (:func:`fluxpart.gapfill.fill_marginal_values`)
        instead of the fill's table.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in the record: with ``gapfill_donors =
        "dark_first"``, night gaps in darkness take dark donors first
        (:func:`fluxpart.gapfill.fill_marginal`); ignored otherwise.
    evening : tuple, optional
        :func:`fluxpart.preceding_light.evening_days` of `index`, where the caller fills
        the same record many times (default: computed where the conditions need it).

    Returns
    -------
    pandas.DataFrame or numpy.ndarray
        :func:`fluxpart.gapfill.fill_marginal`'s table, or the filled values
        [µmol m-2 s-1]. The table's ``attrs["night_light_tests"]``: the years' tests of
        the preceding day's light (:func:`fluxpart.preceding_light.test_records`) where
        the conditions carry it.

    References
    ----------
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439
    (Appendix A: marginal distribution sampling).
    """
    fill = gapfill.fill_marginal_values if values_only else gapfill.fill_marginal
    # the preceding day's light, in the years whose own measured nights show it
    conditions, light_tests = preceding_light.gated_conditions(
        conditions, nee_measured, is_night, index, with_table=not values_only, evening=evening)
    dark_first = config.gapfill_donors == DARK_FIRST
    filled = fill(
        nee_measured, conditions, index, is_night=is_night,
        donors="separate_day_night" if dark_first else config.gapfill_donors,
        rg_tolerance=config.rg_tolerance, tair_tolerance=config.tair_tolerance,
        vpd_tolerance=config.vpd_tolerance, max_window_days=config.gapfill_max_window_days,
        min_donors=config.gapfill_min_donors, gaps=gaps, rg_window=config.gapfill_rg_window,
        night_rg_threshold=config.night_rg_threshold,
        clearness=conditions["clearness"] if "clearness" in conditions else None,
        clearness_tolerance=config.gapfill_clearness_tolerance,
        estimate=config.gapfill_estimate, breaks=gapfill.event_breaks(index, config.events),
        sun_up=sun_up if dark_first else None)
    if not values_only and light_tests is not None:
        filled.attrs["night_light_tests"] = preceding_light.test_records(light_tests)
    return filled


def nighttime_settings(config, rg, index, nearest_year=False, sun_up=None) -> dict:
    """Keyword settings of :func:`fluxpart.partition.nighttime.partition_nighttime`.

    Parameters
    ----------
    config : Config
        Settings (the ``e0_*`` and ``rref_*`` fields and ``events``).
    rg : numpy.ndarray
        Measured global radiation of each record, for the low-light Rref rule [W m-2].
    index : pandas.DatetimeIndex
        The record's stamps (the events' pieces, only where events are declared).
    nearest_year : bool, optional
        A year without an E0 of its own takes the nearest year's.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in each record: passed on where ``night_fit_records =
        "sun_down"`` (the fits then use night records with the sun down,
        :mod:`fluxpart.partition.dark_nights`); ignored otherwise.

    Returns
    -------
    dict
        Keyword arguments of the nighttime method.

    References
    ----------
    Reichstein, M., et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11(9):1424-1439.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    extra = {"e0_nearest_year": True} if nearest_year else {}
    extra.update(event_cut(index, config))
    if config.night_fit_records == SUN_DOWN and sun_up is not None:
        extra["sun_up"] = sun_up
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


def event_cut(index, config) -> dict:
    """``breaks`` of the partitionings' windows where `config` declares events.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The record's stamps.
    config : Config
        Settings; ``events`` (dates of declared events).

    Returns
    -------
    dict
        ``{"breaks": positions}`` (:func:`fluxpart.gapfill.event_breaks`), or empty
        where no event is declared (a run without events calls them exactly as before).
    """
    return {"breaks": gapfill.event_breaks(index, config.events)} if config.events else {}


def damped_delay(config) -> bool:
    """Whether a delayed respiration temperature is damped as conduction damps it.

    Parameters
    ----------
    config : Config
        Settings; ``air_delay_damping``.

    Returns
    -------
    bool
        ``config.air_delay_damping == "conduction"`` (:func:`respiration_temperature`,
        :func:`fluxpart.partition.temperature_choice.damped_delayed`).
    """
    return config.air_delay_damping == "conduction"


def respiration_temperature(table, name, delay, filled=False, damped=False) -> np.ndarray:
    """The respiration driver `name` from `table`, delayed by `delay` records.

    Parameters
    ----------
    table : pandas.DataFrame
        Holds ``name`` and ``name_filled``.
    name : str
        ``"tair"`` or ``"tsoil"``.
    delay : int
        Records by which the temperature is delayed (:func:`fluxpart.partition.
        temperature_choice.delayed`) [records].
    filled : bool, optional
        The gap-filled column (evaluated at every record; the first records take the
        first value), else the measured one (NaN-padded for fits).
    damped : bool, optional
        Damp the daily course before the delay as heat conduction damps it
        (:func:`fluxpart.partition.temperature_choice.damped_delayed`;
        ``air_delay_damping = "conduction"``); no effect without a delay.

    Returns
    -------
    numpy.ndarray
        The temperature of each record [°C].
    """
    values = table[f"{name}_filled" if filled else name].to_numpy(dtype=float)
    pad = "first" if filled else "nan"
    if damped and delay:
        return temperature_choice.damped_delayed(
            values, delay, temperature_choice.records_per_day(table.index), pad=pad)
    return temperature_choice.delayed(values, delay, pad=pad)
