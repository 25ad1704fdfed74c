"""Whether ``run`` will stop at the nighttime E0, known before the run once the u* filter is.

``check`` counts, before the u* threshold is known, whether each year has windows with the
night records and the temperature span an E0 fit needs (:mod:`fluxpart.preflight`). A
year can have such windows and still no E0: every fit rejected (E0 outside ``e0_bounds``,
a relative standard error above ``e0_max_relative_error``, no convergence), as where the
respiration is small against the random error. An invented Antarctic moss bank (Reco
0.15 µmol m-2 s-1, noise 0.2) passed ``check`` with the u* fall-back named alone, and
``run`` stopped at its E0 (round falsealarm51). Once ``check`` has the u* table, the
records the run fits are known, and the run's own fits on them cost a few hundredths of a
second a year: this module runs them.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from . import ustar_stage
from .errors import InsufficientDataError
from .gapfill import event_breaks
from .partition.nighttime import _no_e0_message, fit_e0_joint, fit_e0_windows
from .screening import low_ustar

__all__ = ["e0_stops"]


def _year_has_e0(index, nee, temperature, usable, config) -> tuple[bool, pd.DataFrame]:
    """Whether a window or the joint fit of one year's records is accepted, and its
    windows."""
    cut = event_breaks(index, config.events)
    settings = {"e0_window_days": config.e0_window_days, "e0_min_points": config.e0_min_points,
                "e0_bounds": config.e0_bounds,
                "e0_max_relative_error": config.e0_max_relative_error,
                **({"breaks": cut} if len(cut) else {})}
    values = np.where(usable, nee, np.nan)
    windows = fit_e0_windows(index, values, temperature, usable,
                             e0_window_step_days=config.e0_window_step_days,
                             e0_min_temperature_range=config.e0_min_temperature_range,
                             **settings)
    if windows["accepted"].any():
        return True, windows
    if config.e0_method == "joint":
        joint = fit_e0_joint(index, values, temperature, usable, **settings)
        if bool(joint["accepted"].any()):
            return True, windows
    return False, windows


def e0_stops(screened: pd.DataFrame, is_night, thresholds: pd.Series, config) -> list[str]:
    """The run's stop at the nighttime E0 where no year of the record has one.

    Parameters
    ----------
    screened : pandas.DataFrame
        Screened record (``nee`` [µmol m-2 s-1], ``ustar`` [m s-1], ``tair`` and
        ``tsoil`` [°C] where present), on a DatetimeIndex.
    is_night : array_like of bool
        The night mask of the records.
    thresholds : pandas.Series
        u* threshold of each year [m s-1] (index: year), the run's central one.
    config : Config
        Settings: the E0 window, bounds and method, ``e0_fallback``,
        ``respiration_driver`` and ``events``.

    Returns
    -------
    list of str
        One problem line ("nighttime partitioning (E0): ...") where the run would stop,
        else empty.

    Notes
    -----
    The fits are the run's (:func:`fluxpart.partition.nighttime.fit_e0_windows`, and
    :func:`fluxpart.partition.nighttime.fit_e0_joint` under ``e0_method = "joint"``) on
    the night records the u* filter keeps. The run stops only where no year has an E0
    (a year without one borrows the nearest year's) and ``e0_fallback`` is unset; with
    ``respiration_driver = "auto"`` it tries the other temperature where one fails, so
    the line is given only where both fail. The run may delay the temperature by a few
    records where that fits better (``temperature_choice``); the line is judged on the
    undelayed temperature, which the delay is chosen against.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424-1439 (m).
    """
    if config.e0_fallback is not None or not len(screened) or "nee" not in screened:
        return []
    index = pd.DatetimeIndex(screened.index)
    names = (["tsoil", "tair"] if config.respiration_driver == "auto"
             else [config.respiration_driver])
    names = [name for name in names if name in screened.columns]
    if not names or "ustar" not in screened.columns:
        return []
    per_record = ustar_stage.per_record(index, thresholds)
    nee = screened["nee"].to_numpy(dtype=float)
    calm = low_ustar(screened["ustar"].to_numpy(dtype=float), is_night, per_record)
    night = np.asarray(is_night, dtype=bool) & np.isfinite(nee) & ~calm
    first = None
    record_years = index.year.to_numpy()
    # the distinct years as Python ints, in order: NumPy's unique, not a set of every stamp
    for year in np.unique(record_years).tolist():
        mine = record_years == year
        for name in names:
            temperature = screened[name].to_numpy(dtype=float)[mine]
            usable = night[mine] & np.isfinite(temperature)
            try:
                found, windows = _year_has_e0(index[mine], nee[mine], temperature, usable,
                                              config)
            except InsufficientDataError as error:     # no night record left: the run's
                found, windows = False, str(error)     # own error names it
            if found:
                return []                 # every other year may borrow this one's E0
            if first is None:
                first = (windows if isinstance(windows, str) else _no_e0_message(
                    int(year), int(usable.sum()), windows[windows["year"] == year]))
    shown = " and ".join(names)
    return [f"nighttime partitioning (E0): on {shown}: {first}"] if first else []
