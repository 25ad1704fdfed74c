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

__all__ = ["AIR_MOLES_PER_M3", "LEVEL_WORDS", "MAX_COLUMN_RISE", "SHORT_COLUMN_M",
           "SMOOTHS_WORDS", "STORAGE_SMOOTHS_MARK", "daily_store_swing",
           "oversized_storage", "storage_smooths_nee", "storage_unit_oversized"]

#: Words of :func:`fluxpart.column_faults.storage_in_turbulent_flux`'s message on a
#: storage column that is a level (a running sum swings too, and that message names it).
LEVEL_WORDS = "looks like a level, not a change"
#: Words of :func:`storage_smooths_nee`'s message.
SMOOTHS_WORDS = "outweighs the flux's random error"
#: Key of ``frame.attrs`` the reader sets (True) where :func:`storage_smooths_nee` named
#: the storage column: the preflight's smoothed-NEE finding, which the storage explains,
#: is then left out (:func:`fluxpart.screening_stage.clock_and_preflight`). A mark, not
#: the message's wording, which may change (round review47 found the wording matched).
STORAGE_SMOOTHS_MARK = "storage_smooths_nee"
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
    clause = _column_rise_clause(storage, stamps, interval_minutes, canopy)
    if clause is None:
        return None
    term = (columns or {}).get("storage", "storage")
    return (f"the storage column ({term!r}) is too large {clause}; check the storage "
            "column's unit: it is added to NEE as the change of the stored CO2 in µmol "
            "m-2 s-1 (a mole fraction's change per interval is not that)")


def _column_rise_clause(storage, stamps, interval_minutes: float,
                        canopy: str | None) -> str | None:
    """The size part of :func:`oversized_storage`'s message (from "for the air below a
    short canopy's sensor" to "at most"), or None where the store is not too large or
    the canopy not short; shared with :func:`storage_unit_oversized`.

    ``storage`` is in µmol m-2 s-1, ``interval_minutes`` in minutes.
    """
    if canopy != "short":
        return None
    swing = daily_store_swing(storage, stamps, interval_minutes)   # mol m-2
    if not np.isfinite(swing):
        return None
    rise = swing / (AIR_MOLES_PER_M3 * SHORT_COLUMN_M) * 1e6     # µmol mol-1
    if not rise > MAX_COLUMN_RISE:
        return None
    return (f"for the air below a short canopy's sensor: summed over a day it swings by "
            f"{swing * 1e3:.0f} mmol m-2 (median day), a rise of {rise:.0f} µmol mol-1 in "
            f"the mean CO2 of a {SHORT_COLUMN_M:g} m column, while calm nights raise it by "
            "some hundreds at most")


def storage_smooths_nee(turbulent, storage, is_night, stamps, interval_minutes: float,
                        columns=None) -> str | None:
    """A message where the storage column, not the flux, makes NEE change as a running mean.

    Parameters
    ----------
    turbulent : array_like
        The flux column mapped as ``nee`` [µmol m-2 s-1].
    storage : array_like
        The column mapped as ``storage`` [µmol m-2 s-1], added to it to form NEE.
    is_night : array_like of bool
        Records with the sun below the horizon.
    stamps : pandas.DatetimeIndex
        Start of each record.
    interval_minutes : float
        Length of a record [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text where NEE (flux + storage) changes from one night record to the
        next as a running mean's (:func:`fluxpart.nee_smoothing.smoothed_nee`) while the
        flux alone changes as separate records' do; None otherwise.

    Notes
    -----
    A storage term is the change of a smooth store (a profile's or one height's CO2
    over the interval), so its record-to-record changes are small beside the turbulent
    flux's independent random error, and NEE keeps the error's signature (consecutive
    changes correlating at -1/2; :mod:`fluxpart.nee_smoothing`). Where only the sum
    loses it, the storage column's changes outweigh the flux's random error: a store
    larger than the air below a short canopy holds (a unit or a factor: the maize
    example's store written ten times too large swings by 974 µmol mol-1 in a 10 m
    column, just below :data:`MAX_COLUMN_RISE`, and its night changes have a median of
    2.2 times the flux's, against 0.22 as written), not a smoothed flux column, which
    the preflight's own warning would name.

    References
    ----------
    Finnigan, J. (2006). Agricultural and Forest Meteorology 136, 108-113.

    Hollinger, D. Y., & Richardson, A. D. (2005). Tree Physiology 25(7):873-885 (m)
    """
    from .nee_smoothing import smoothed_nee

    flux = np.asarray(turbulent, dtype=float)
    store = np.asarray(storage, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    if smoothed_nee(flux + store, night) is None or smoothed_nee(flux, night) is not None:
        return None
    pair = night[1:] & night[:-1]
    flux_change, store_change = np.abs(np.diff(flux))[pair], np.abs(np.diff(store))[pair]
    both = np.isfinite(flux_change) & np.isfinite(store_change)
    ratio = float(np.median(store_change[both]) / np.median(flux_change[both]))
    swing = daily_store_swing(store, stamps, interval_minutes)
    rise = swing / (AIR_MOLES_PER_M3 * SHORT_COLUMN_M) * 1e6
    names = columns or {}
    term, flux_name = names.get("storage", "storage"), names.get("nee", "nee")
    implied = (f"; summed over a day the store swings by {swing * 1e3:.0f} mmol m-2 (median "
               f"day), a rise of {rise:.0f} µmol mol-1 in the mean CO2 of a "
               f"{SHORT_COLUMN_M:g} m column" if np.isfinite(swing) else "")
    return (f"the storage column ({term!r}) {SMOOTHS_WORDS}: NEE "
            f"({flux_name!r} + {term!r}) changes from one night record to the next as a "
            f"running mean's would, while {flux_name!r} alone changes as separate records' "
            f"do, and the store's night changes have a median {ratio:.2g} times the flux's"
            f"{implied}; a storage term is the change of a smooth store and small beside the "
            "flux's random error: check the storage column's unit and scale (a factor in "
            "the logger program or export?) before reading GPP and Reco")


def storage_unit_oversized(storage, stamps, interval_minutes: float, canopy: str | None,
                           ratio: float | None) -> str | None:
    """How the storage column read in another unit than the flux it is added to is too
    large, where read in the flux's unit it is not.

    Parameters
    ----------
    storage : array_like
        The column mapped as ``storage``, converted from its declared unit [µmol m-2 s-1].
    stamps : pandas.DatetimeIndex
        Start of each record.
    interval_minutes : float
        Length of a record [min].
    canopy : {"short", "tall"} or None
        ``[site] canopy``; only a short canopy is judged.
    ratio : float or None
        How many times larger the column reads in its declared unit than in the flux's
        (:func:`fluxpart.storage_labels.storage_unit_ratio`); None or 1 or less: not judged.

    Returns
    -------
    str or None
        The size clause of :func:`oversized_storage`'s message ("for the air below a
        short canopy's sensor: ... at most"), for the reader's refusal to complete; None
        where not so.

    Notes
    -----
    Two signs agree that the declared unit is wrong (round mistakes56: maize's storage
    declared "mg CO2 m-2 s-1" over µmol values moved GPP by +7063 g C m-2, 469 sigma,
    warned only): a flux and its storage term are written by one program in one unit
    (common practice (m)), and so read the store implies a rise of the column's CO2 that
    no air below a short canopy's sensor holds (Finnigan 2006), which the flux's unit
    does not. A store too large in either reading is left to :func:`oversized_storage`.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    if ratio is None or not ratio > 1.0:
        return None
    found = _column_rise_clause(storage, stamps, interval_minutes, canopy)
    if found is None or _column_rise_clause(np.asarray(storage, dtype=float) / ratio, stamps,
                                            interval_minutes, canopy) is not None:
        return None
    return found
