"""One partitioning method that cannot fit, while NEE and the other method stand.

The nighttime (Reichstein et al. 2005) and daytime (Lasslop et al. 2010) methods are
independent estimates of GPP and Reco from the same gap-filled NEE. A record can hold
what one of them needs and not the other: weeks of polar night give the nighttime
method its night records but the daytime method no light response; a record of
midsummer near the pole gives the reverse. Before 0.19.0 either method's failure
stopped the run, and the user had neither the filled NEE nor the other method's
partitioning, both of which are valid.

Here a run goes on when exactly one method cannot fit: that method's per-record
GPP and Reco are NaN (:func:`nan_nighttime`, :func:`nan_daytime`), so its daily,
monthly and annual sums, their uncertainty and 95 % intervals and the method
comparison are NaN too (the sums of :mod:`fluxpart.budget` keep a NaN record NaN),
and a warning names the method, the budget years and the reason from the method's
own error (:func:`failure_warning`). Both methods failing, or the nighttime E0
missing where no year of the record has one, still stops the run with the method's
error, as before. Both methods fit on the same record as before wherever they can:
nothing here changes a run in which both fit.

The nighttime method's E0 of a calendar year too short or too poor to estimate it
can come from the nearest year of the record that has one
(:func:`fluxpart.partition.nighttime.annual_e0`, ``nearest_year``); :func:`first_fit`
asks for that only after the plain fit failed, so a record whose every year has an
E0 of its own is partitioned exactly as before.

References
----------
Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.
doi:10.1111/j.1365-2486.2005.001002.x

Lasslop, G. et al. (2010). Global Change Biology 16:187–208.
doi:10.1111/j.1365-2486.2009.02041.x
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import InsufficientDataError
from .partition.daytime import PARAMETER_COLUMNS, DaytimeResult
from .partition.nighttime import NighttimeResult

__all__ = ["METHOD_COLUMNS", "blank", "borrowed_e0", "failed", "failed_methods",
           "failure_warning", "first_fit", "nan_daytime", "nan_nighttime", "partition_both"]

#: The per-record columns each method gives (µmol m-2 s-1), NaN where it failed.
METHOD_COLUMNS = {"nighttime": ("gpp_nighttime", "reco_nighttime"),
                  "daytime": ("gpp_daytime", "reco_daytime")}


def nan_nighttime(length: int, respiration_driver: str) -> NighttimeResult:
    """The nighttime result of a method that could not fit: NaN per record, no windows.

    Parameters
    ----------
    length : int
        Records of the run.
    respiration_driver : str
        Name of the driving temperature (``"tair"`` or ``"tsoil"``), for the record.

    Returns
    -------
    NighttimeResult
        ``reco``, ``gpp``, ``rref``, ``e0`` all NaN [µmol m-2 s-1, K]; the window
        tables empty with the columns of a fit (``e0_annual`` indexed by ``year``).
    """
    nan = np.full(int(length), np.nan)
    e0_windows = pd.DataFrame({
        "window_start": pd.Series(dtype="datetime64[ns]"),
        "window_end": pd.Series(dtype="datetime64[ns]"),
        "window_centre": pd.Series(dtype="datetime64[ns]"), "year": pd.Series(dtype="int64"),
        "points": pd.Series(dtype="int64"), "temperature_range": pd.Series(dtype=float),
        "e0": pd.Series(dtype=float), "e0_se": pd.Series(dtype=float),
        "rref": pd.Series(dtype=float), "rref_se": pd.Series(dtype=float),
        "accepted": pd.Series(dtype=bool), "reason": pd.Series(dtype="str")})
    e0_annual = pd.DataFrame({
        "e0": pd.Series(dtype=float), "e0_se": pd.Series(dtype=float),
        "windows_accepted": pd.Series(dtype="int64"), "windows_used": pd.Series(dtype="int64"),
        "windows_tried": pd.Series(dtype="int64"), "night_records": pd.Series(dtype="int64"),
        "source": pd.Series(dtype="str")}, index=pd.Index([], dtype="int64", name="year"))
    rref_windows = pd.DataFrame({
        "window_start": pd.Series(dtype="datetime64[ns]"),
        "window_end": pd.Series(dtype="datetime64[ns]"),
        "window_centre": pd.Series(dtype="datetime64[ns]"), "points": pd.Series(dtype="int64"),
        "rref": pd.Series(dtype=float), "rref_se": pd.Series(dtype=float),
        "e0": pd.Series(dtype=float), "source": pd.Series(dtype="str")})
    return NighttimeResult(reco=nan, gpp=nan.copy(), rref=nan.copy(), e0=nan.copy(),
                           e0_windows=e0_windows, e0_annual=e0_annual,
                           rref_windows=rref_windows, respiration_driver=respiration_driver)


def nan_daytime(length: int) -> DaytimeResult:
    """The daytime result of a method that could not fit: NaN per record, no windows.

    Parameters
    ----------
    length : int
        Records of the run.

    Returns
    -------
    DaytimeResult
        ``gpp``, ``reco``, ``e0`` all NaN [µmol m-2 s-1, K]; ``parameters`` empty with
        the columns :data:`fluxpart.partition.daytime.PARAMETER_COLUMNS`.
    """
    nan = np.full(int(length), np.nan)
    kinds = {"window_start": "datetime64[ns]", "window_end": "datetime64[ns]",
             "window_centre": "datetime64[ns]", "points": "int64", "night_points": "int64",
             "e0_points": "int64", "e0_source": "str", "weighted": bool, "accepted": bool,
             "status": "str", "reason": "str", "k_fixed": bool}
    parameters = pd.DataFrame({name: pd.Series(dtype=kinds.get(name, float))
                               for name in PARAMETER_COLUMNS})
    return DaytimeResult(gpp=nan, reco=nan.copy(), e0=nan.copy(), parameters=parameters)


def failed(result) -> bool:
    """Whether `result` (a nighttime or daytime result) is that of a method that failed.

    A fit always keeps at least one window (else it raises); the results of
    :func:`nan_nighttime` and :func:`nan_daytime` have none.
    """
    if isinstance(result, NighttimeResult):
        return len(result.e0_annual) == 0
    return len(result.parameters) == 0


def failed_methods(night, day) -> list:
    """Names of the methods whose results (`night`, `day`) are those of a failed fit."""
    return [name for name, result in (("nighttime", night), ("daytime", day)) if failed(result)]


def blank(table: pd.DataFrame, methods) -> pd.DataFrame:
    """`table` with every number column of the methods that could not fit set NaN.

    The columns of a method are those named ``gpp_<method>...`` or ``reco_<method>...``
    (sums, 1-sigma parts, totals, 95 % intervals, u* scenarios). An uncertainty part
    computed from another model (the respiration form's shift, say) has no sum to
    belong to where the method gave none.

    Parameters
    ----------
    table : pandas.DataFrame
        A daily, monthly or annual budget table.
    methods : collection of str
        ``"nighttime"`` and/or ``"daytime"``.

    Returns
    -------
    pandas.DataFrame
        A new table (the same object where `methods` is empty).
    """
    if not methods:
        return table
    prefixes = tuple(f"{flux}_{method}" for method in methods for flux in ("gpp", "reco"))
    columns = [column for column in table.columns if str(column).startswith(prefixes)
               and pd.api.types.is_float_dtype(table[column])]
    return table.assign(**{column: np.nan for column in columns})


def borrowed_e0(night) -> bool:
    """Whether a nighttime result took some year's E0 from the nearest year with one."""
    source = night.e0_annual.get("source")
    return bool(source is not None and (source == "nearest_year").any())


def first_fit(fit):
    """``fit(False)``, else ``fit(True)`` where the first raises InsufficientDataError.

    Parameters
    ----------
    fit : callable
        ``fit(nearest_year)`` runs the nighttime method (or a step built on it) with
        the nearest year's E0 allowed (True) or not (False).

    Returns
    -------
    object
        What the first call that succeeds returns.

    Raises
    ------
    InsufficientDataError
        The first attempt's error where the second fails too (its message names what
        the record lacks; the second's adds nothing when no year has an E0).
    """
    try:
        return fit(False)
    except InsufficientDataError as error:
        try:
            return fit(True)
        except InsufficientDataError:
            raise error from None


def partition_both(fit_nighttime, fit_daytime, length, respiration_driver, *, skip=(),
                   degrade=True):
    """Both methods' results, the one that cannot fit replaced by NaN where allowed.

    Parameters
    ----------
    fit_nighttime : callable
        ``fit_nighttime()`` -> NighttimeResult; raises InsufficientDataError.
    fit_daytime : callable
        ``fit_daytime(night)`` -> DaytimeResult given the nighttime result (whose E0
        the daytime method may take where its own night data give none; NaN where the
        nighttime method failed); raises InsufficientDataError.
    length : int
        Records of the run.
    respiration_driver : str
        Driving temperature's name, for a NaN nighttime result.
    skip : collection of str, optional
        Methods not to fit at all (NaN results), e.g. those that failed in the central
        run, for a u* scenario.
    degrade : bool, optional
        True: a method that raises is replaced by NaN and its error returned; False:
        its error propagates (a u* scenario, left out as before).

    Returns
    -------
    night : NighttimeResult
    day : DaytimeResult
    errors : dict
        Method name -> the InsufficientDataError that stopped it (empty where both fit
        or where a method was only skipped).

    Raises
    ------
    InsufficientDataError
        Where both methods fail (the nighttime method's error, as before 0.19.0, which
        never reached the daytime method then), or one fails and `degrade` is False.
    """
    errors = {}
    if "nighttime" in skip:
        night = nan_nighttime(length, respiration_driver)
    else:
        try:
            night = fit_nighttime()
        except InsufficientDataError as error:
            if not degrade or "daytime" in skip:
                raise
            errors["nighttime"] = error
            night = nan_nighttime(length, respiration_driver)
    if "daytime" in skip:
        return night, nan_daytime(length), errors
    try:
        day = fit_daytime(night)
    except InsufficientDataError as error:
        if "nighttime" in errors:
            raise errors["nighttime"] from None
        if not degrade or "nighttime" in skip:
            raise
        errors["daytime"] = error
        day = nan_daytime(length)
    return night, day, errors


def failure_warning(method: str, years, error) -> str:
    """The warning of a method that could not fit.

    Parameters
    ----------
    method : {"nighttime", "daytime"}
        The method that failed.
    years : iterable of int
        The budget years it could not fit (those of the record).
    error : Exception
        Its error; the text gives the reason.

    Returns
    -------
    str
        Names the method, the years, the reason and the NaN columns.
    """
    other = {"nighttime": "daytime", "daytime": "nighttime"}[method]
    gpp, reco = METHOD_COLUMNS[method]
    years = ", ".join(str(int(year)) for year in sorted(set(years)))
    reason = str(error).rstrip(". ")
    return (f"{method} partitioning could not fit {years} ({reason}): its GPP and Reco "
            f"({gpp}, {reco}), their daily, monthly and annual sums, uncertainty and 95 % "
            f"intervals and the comparison of the two methods are NaN there; NEE and the "
            f"{other} method's GPP and Reco are computed as usual, their uncertainty "
            "without the part from the difference between the methods (uncertainty_parts_"
            "missing names it)")
