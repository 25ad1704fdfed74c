"""A storage column too large for the air below a short canopy's sensor (round mistakes34).

The storage term is the change of the CO2 held in the air below the sensor (Finnigan
2006). Summed over a day it swings between the morning's emptied store and the
evening's or night's full one; that swing, divided by the moles of air in the column
below the sensor, is the rise of the column's mean CO2 mole fraction over the night. At a
short canopy the sensor stands a few metres up, and the column's mean rise stays within
a few hundred µmol mol-1 even under a strong inversion; a storage column in another unit
(a mole fraction's change per interval, a mass read as moles) implies thousands.

References
----------
Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and Forest
Meteorology 136, 108-113.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["AIR_MOLES_PER_M3", "LEVEL_WORDS", "MAX_COLUMN_RISE", "SHORT_COLUMN_M", "daily_store_swing",
           "oversized_storage"]

#: Words of :func:`fluxpart.column_faults.storage_in_turbulent_flux`'s message on a
#: storage column that is a level (a running sum swings too, and that message names it).
LEVEL_WORDS = "looks like a level, not a change"
#: Moles of air per cubic metre at 15 °C and 1013.25 hPa, p / (R T) =
#: 101325 / (8.314 * 288.15) [mol m-3] (ideal gas law).
AIR_MOLES_PER_M3 = 101325.0 / (8.314 * 288.15)
#: Height of the air column below a short canopy's sensor taken for the bound [m]; our
#: choice, generous: sensors over grass and crops stand 2-5 m up (common practice), so
#: 10 m halves the implied rise at least.
SHORT_COLUMN_M = 10.0
#: Largest rise of the column's mean CO2 mole fraction over a night [µmol mol-1]; our
#: choice: calm nights over crops raise CO2 near the ground by some hundreds of µmol
#: mol-1 (m), less higher up, so the column's mean stays below it; 1000 is about two and
#: a half times the background itself.
MAX_COLUMN_RISE = 1000.0
#: Days the storage column must cover (at least 80 % of their records) to be judged.
_MIN_DAYS = 14


def daily_store_swing(storage, stamps, interval_minutes: float) -> float:
    """Median over days of the swing of the store the storage column implies [mol m-2].

    Parameters
    ----------
    storage : array_like
        The storage term of each record [µmol m-2 s-1].
    stamps : pandas.DatetimeIndex
        Start of each record.
    interval_minutes : float
        Length of a record [min].

    Returns
    -------
    float
        The median, over days with at least 80 % of their records, of the largest minus
        the smallest running sum of ``storage * interval`` within the day [mol m-2]; NaN
        with fewer than 14 such days.

    References
    ----------
    Finnigan, J. (2006). Agricultural and Forest Meteorology 136, 108-113 (the storage
    term is the change of the store, so its running sum is the store up to a constant).
    """
    values = np.asarray(storage, dtype=float) * float(interval_minutes) * 60.0 * 1e-6
    series = pd.Series(values, index=pd.DatetimeIndex(stamps))
    per_day = round(24 * 60 / float(interval_minutes))
    swings = []
    for _, day in series.groupby(series.index.normalize()):
        present = day.to_numpy()
        present = present[np.isfinite(present)]
        if present.size < 0.8 * per_day:
            continue
        store = np.concatenate([[0.0], np.cumsum(present)])
        swings.append(float(store.max() - store.min()))
    if len(swings) < _MIN_DAYS:
        return np.nan
    return float(np.median(swings))


def oversized_storage(storage, stamps, interval_minutes: float, canopy: str | None,
                      columns=None) -> str | None:
    """A message where the storage column implies more CO2 than a short canopy's air holds.

    Parameters
    ----------
    storage : array_like
        The column mapped as ``storage`` [µmol m-2 s-1].
    stamps : pandas.DatetimeIndex
        Start of each record.
    interval_minutes : float
        Length of a record [min].
    canopy : {"short", "tall"} or None
        ``[site] canopy``; only a short canopy is judged (a tall one's column height is
        not known).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text where the median daily swing of the store
        (:func:`daily_store_swing`) over :data:`SHORT_COLUMN_M` of air
        (:data:`AIR_MOLES_PER_M3`) is a rise of the column's mean mole fraction beyond
        :data:`MAX_COLUMN_RISE`; None otherwise.

    Notes
    -----
    The store's swing over a day is the night's gain of CO2 below the sensor, the
    column's mean mole-fraction rise times its moles of air (ideal gas). A storage
    column of a mole fraction's change per interval, or of mg CO2 where µmol were meant
    the other way round, multiplies it by tens.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    if canopy != "short":
        return None
    swing = daily_store_swing(storage, stamps, interval_minutes)
    if not np.isfinite(swing):
        return None
    rise = swing / (AIR_MOLES_PER_M3 * SHORT_COLUMN_M) * 1e6
    if not rise > MAX_COLUMN_RISE:
        return None
    term = (columns or {}).get("storage", "storage")
    return (f"the storage column ({term!r}) is too large for the air below a short "
            f"canopy's sensor: summed over a day it swings by {swing * 1e3:.0f} mmol m-2 "
            f"(median day), a rise of {rise:.0f} µmol mol-1 in the mean CO2 of a "
            f"{SHORT_COLUMN_M:g} m column, while calm nights raise it by some hundreds at "
            "most; check the storage column's unit: it is added to NEE as the change of "
            "the stored CO2 in µmol m-2 s-1 (a mole fraction's change per interval is not "
            "that)")
