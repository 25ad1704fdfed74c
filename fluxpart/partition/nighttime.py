"""Nighttime partitioning of NEE into ecosystem respiration and gross production.

The method of Reichstein et al. (2005): night-time NEE is ecosystem respiration,
whose temperature response follows Lloyd & Taylor (1994). Its temperature
sensitivity E0 is fitted in short windows of measured night data and combined
into one value per calendar year; with E0 fixed, the reference respiration Rref
is fitted in consecutive 4-day windows and interpolated to every record.
A calendar year too short or too poor in night data for an E0 of its own (a stub of
a few days at the record's edge) can take the E0 of the nearest year of the same
record that has one (``e0_nearest_year``; :func:`annual_e0`, Notes). The pipeline
asks for this only where the run would otherwise stop for want of that E0, so a
record whose years all have their own E0 is partitioned as before.
Respiration is then the Lloyd–Taylor equation on the gap-filled temperature,
and gross primary production is respiration minus the gap-filled NEE.

All functions are pure: they take arrays aligned with a start-stamped
:class:`pandas.DatetimeIndex` and return new arrays and DataFrames.

References
----------
Reichstein, M., Falge, E., Baldocchi, D., et al. (2005). On the separation of net
ecosystem exchange into assimilation and ecosystem respiration: review and
improved algorithm. Global Change Biology 11:1424–1439.
doi:10.1111/j.1365-2486.2005.001002.x

Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
respiration. Functional Ecology 8:315–323. doi:10.2307/2389824
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .._validate import as_float
from ..constants import (
    KELVIN_OFFSET,
    LLOYD_TAYLOR_E0_KELVIN,
    LLOYD_TAYLOR_T0_KELVIN,
    LLOYD_TAYLOR_TREF_KELVIN,
)
from ..errors import (
    ConfigError,
    FluxpartError,
    ImplausibleValueError,
    InsufficientDataError,
    LengthMismatchError,
)
from ..responses import lloyd_taylor, lloyd_taylor_derivatives
from ..variables import VARIABLES
from . import dark_nights, pieces

__all__ = [
    "LOW_LIGHT_MIN_RUN_DAYS",
    "NighttimeResult",
    "annual_e0",
    "apply_fit",
    "fit_e0_joint",
    "fit_e0_windows",
    "fit_rref_windows",
    "nearest_year_notes",
    "partition_nighttime",
    "rref_per_record",
]

_SECONDS_PER_DAY = 86400.0

LOW_LIGHT_MIN_RUN_DAYS = 15.0
"""Shortest run of Rref windows without enough night records [days] that the low-light
rule of :func:`fit_rref_windows` fills; across shorter runs Rref is interpolated. 15 days:
the window over which Reichstein et al. (2005) take the temperature response as constant;
over longer spans the seasonal course of respiration makes a straight line between the
neighbouring windows a poor guess (on generated 69–72° N site-years, interpolation across
the weeks of midnight sun left annual Reco up to 34 % low)."""
#: Largest standard error of a window's Rref [µmol m-2 s-1] that still resolves it: the
#: plausible maximum of NEE itself (``VARIABLES["nee"].maximum``), above which the
#: window's night records do not tell Rref from any respiration a record can hold.
RREF_SE_LIMIT = VARIABLES["nee"].maximum
# Levenberg–Marquardt controls of the batched E0 fit (our choices): relative
# parameter change and relative SSR change below which a window has converged.
_LM_MAX_ITERATIONS = 200
_LM_XTOL = 1e-10
_LM_FTOL = 1e-14
_LM_LAMBDA_START = 1e-3
_LM_LAMBDA_GIVE_UP = 1e12
# Driving temperatures outside this range are not in °C (kelvin or a unit
# mix-up) [°C]; our choice, no narrower than the plausible air and soil temperatures of
# fluxpart.variables (a bare desert soil at 2-5 cm reaches 70-80 °C, which the reader
# accepts: the former upper limit of 70 °C refused such a record here, naming an
# internal array and row). Lloyd-Taylor and its exponential equivalent stay finite far
# beyond (T - T0 > 0; 2 (Tref - T0) > T - Tref up to 122 °C).
_TEMPERATURE_LIMITS = (-90.0, max(VARIABLES["tair"].maximum, VARIABLES["tsoil"].maximum))
_RESPIRATION_DRIVERS = ("tair", "tsoil")
_E0_METHODS = ("joint", "best_windows")


# --------------------------------------------------------------------------- #
# Result object
# --------------------------------------------------------------------------- #
@dataclass(frozen=True)
class NighttimeResult:
    """Outcome of :func:`partition_nighttime`.

    Attributes
    ----------
    reco : numpy.ndarray
        Ecosystem respiration per record [µmol m-2 s-1], Lloyd–Taylor on the
        gap-filled temperature; NaN where that temperature is missing.
    gpp : numpy.ndarray
        Gross primary production per record [µmol m-2 s-1], ``reco - nee_filled``;
        NaN where either is missing. Not clipped: at night it scatters around zero
        by the noise of NEE and of the respiration model, and small negative
        values are kept as computed so that sums stay unbiased.
    rref : numpy.ndarray
        Reference respiration at 10 °C per record [µmol m-2 s-1], interpolated
        between the Rref window centres.
    e0 : numpy.ndarray
        Temperature sensitivity applied to each record [K] (its year's E0).
    e0_windows : pandas.DataFrame
        Every short-window E0 fit, see :func:`fit_e0_windows`.
    e0_annual : pandas.DataFrame
        E0 per calendar year, see :func:`annual_e0`.
    rref_windows : pandas.DataFrame
        The retained Rref windows, see :func:`fit_rref_windows`.
    respiration_driver : str
        Name of the driving temperature (``"tair"`` or ``"tsoil"``), for the record.
    """

    reco: np.ndarray
    gpp: np.ndarray
    rref: np.ndarray
    e0: np.ndarray
    e0_windows: pd.DataFrame
    e0_annual: pd.DataFrame
    rref_windows: pd.DataFrame
    respiration_driver: str


# --------------------------------------------------------------------------- #
# Input checks
# --------------------------------------------------------------------------- #
def _check_index(index) -> pd.DatetimeIndex:
    if not isinstance(index, pd.DatetimeIndex):
        raise FluxpartError(f"index: expected a pandas DatetimeIndex of interval starts, "
                            f"found {type(index).__name__}")
    if len(index) == 0:
        raise InsufficientDataError("nighttime partitioning: the record is empty (no rows)")
    if index.hasnans:
        raise FluxpartError("index: contains missing timestamps (NaT)")
    if not index.is_monotonic_increasing or not index.is_unique:
        raise FluxpartError("index: timestamps must be unique and increasing")
    return index


def _as_float(name: str, values, length: int) -> np.ndarray:
    return as_float(values, name, length)


def _as_temperature(name: str, values, length: int) -> np.ndarray:
    array = _as_float(name, values, length)
    finite = array[np.isfinite(array)]
    low, high = _TEMPERATURE_LIMITS
    outside = np.flatnonzero((array < low) | (array > high))
    if finite.size and outside.size:
        row = int(outside[0])
        hint = " (kelvin? convert to °C)" if array[row] > 200 else ""
        raise ImplausibleValueError(
            f"{name}: {outside.size} values outside {low:g}..{high:g} °C, first at row {row} "
            f"({array[row]:g}){hint}")
    return array


def _as_night(name: str, values, length: int) -> np.ndarray:
    if isinstance(values, (pd.Series, pd.Index)):
        if values.isna().any():
            row = int(np.flatnonzero(values.isna().to_numpy())[0])
            raise FluxpartError(f"{name}: missing value at row {row}; expected True/False "
                                "for every record")
        values = values.to_numpy()
    array = np.asarray(values)
    if array.ndim != 1 or array.shape[0] != length:
        raise LengthMismatchError(f"{name}: expected {length} values aligned with the index, "
                                  f"found shape {array.shape}")
    if array.dtype == bool:
        return array
    try:
        numbers = array.astype(float)
    except (TypeError, ValueError):
        raise FluxpartError(f"{name}: expected True/False values, found dtype {array.dtype}") \
            from None
    bad = np.flatnonzero(~np.isin(numbers, (0.0, 1.0)))
    if bad.size:
        raise FluxpartError(f"{name}: expected True/False (or 1/0) for every record, found "
                            f"{array[bad[0]]!r} at row {int(bad[0])}")
    return numbers == 1.0


def _check_positive(name: str, value) -> float:
    if not isinstance(value, (int, float)) or isinstance(value, bool) or not value > 0:
        raise ConfigError(f"{name} = {value!r}: expected a positive number")
    return float(value)


def _check_count(name: str, value) -> int:
    if not isinstance(value, (int, np.integer)) or isinstance(value, bool) or value < 1:
        raise ConfigError(f"{name} = {value!r}: expected a whole number >= 1")
    return int(value)


def _check_bounds(value) -> tuple[float, float]:
    try:
        low, high = (float(v) for v in value)
    except (TypeError, ValueError):
        raise ConfigError(f"e0_bounds = {value!r}: expected (low, high) in K") from None
    if not 0 < low < high:
        raise ConfigError(f"e0_bounds = {value!r}: expected 0 < low < high [K]")
    return low, high


# --------------------------------------------------------------------------- #
# Time axis and windows
# --------------------------------------------------------------------------- #
def _window_anchor(index: pd.DatetimeIndex) -> pd.Timestamp:
    """Local noon at or before the first record: windows then never split a night."""
    half_day = pd.Timedelta(hours=12)
    return (index[0] - half_day).normalize() + half_day


def _seconds_since(index: pd.DatetimeIndex, anchor: pd.Timestamp) -> np.ndarray:
    return np.asarray((index - anchor) / pd.Timedelta(seconds=1), dtype=float)


def _record_end_seconds(seconds: np.ndarray) -> float:
    """End of the last interval [s since the anchor] (its start plus the spacing)."""
    spacing = float(np.median(np.diff(seconds))) if len(seconds) > 1 else 1800.0
    return float(seconds[-1] + spacing)


def _window_frame(anchor, starts_seconds, length_seconds, **columns) -> pd.DataFrame:
    """Window start, end and centre, then `columns` (one value per window)."""
    starts = anchor + pd.to_timedelta(starts_seconds, unit="s")
    length = pd.Timedelta(seconds=float(length_seconds))
    return pd.DataFrame({"window_start": starts, "window_end": starts + length,
                         "window_centre": starts + length / 2, **columns})


def _bounded_frame(anchor, starts_seconds, ends_seconds, **columns) -> pd.DataFrame:
    """Window start, end and centre of windows of their own lengths (cut at events)."""
    starts = anchor + pd.to_timedelta(starts_seconds, unit="s")
    ends = anchor + pd.to_timedelta(ends_seconds, unit="s")
    return pd.DataFrame({"window_start": starts, "window_end": ends,
                         "window_centre": starts + (ends - starts) / 2, **columns})


def _gather(window_lo, window_hi, *columns):
    """Pad the records of every window into (windows, points) arrays and a mask."""
    counts = window_hi - window_lo
    width = max(int(counts.max()) if counts.size else 0, 1)
    offsets = np.arange(width)
    mask = offsets[None, :] < counts[:, None]
    positions = np.where(mask, window_lo[:, None] + offsets[None, :], 0)
    gathered = []
    for column in columns:
        values = column[positions] if column.size else np.zeros(positions.shape)
        gathered.append(np.where(mask, values, 0.0))
    return counts, mask, gathered


def _temperature_term(temperature):
    """``1/(Tref - T0) - 1/(T - T0)`` of Lloyd & Taylor (1994) eq. 11 [K-1]."""
    kelvin = np.asarray(temperature, dtype=float) + KELVIN_OFFSET
    return (1.0 / (LLOYD_TAYLOR_TREF_KELVIN - LLOYD_TAYLOR_T0_KELVIN)
            - 1.0 / (kelvin - LLOYD_TAYLOR_T0_KELVIN))


# --------------------------------------------------------------------------- #
# Batched Levenberg–Marquardt fit of (Rref, E0)
# --------------------------------------------------------------------------- #
def _sum_of_squares(temperature, flux, mask, rref, e0):
    d_rref, d_e0 = lloyd_taylor_derivatives(temperature, rref[:, None], e0[:, None])
    with np.errstate(over="ignore", invalid="ignore"):
        residual = np.where(mask, flux - rref[:, None] * d_rref, 0.0)
        ssr = np.sum(residual * residual, axis=1)
    return ssr, residual, np.where(mask, d_rref, 0.0), np.where(mask, d_e0, 0.0)


def _initial_guess(temperature, flux, mask, counts):
    """Log-linear start for E0 on the positive fluxes, then Rref in closed form."""
    term = np.where(mask, _temperature_term(np.where(mask, temperature, 10.0)), 0.0)
    positive = mask & (flux > 0)
    n_positive = positive.sum(axis=1)
    log_flux = np.where(positive, np.log(np.where(positive, flux, 1.0)), 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_term = np.sum(np.where(positive, term, 0.0), axis=1) / n_positive
        mean_log = np.sum(log_flux, axis=1) / n_positive
        centred = np.where(positive, term - mean_term[:, None], 0.0)
        slope = (np.sum(centred * (log_flux - mean_log[:, None]), axis=1)
                 / np.sum(centred * centred, axis=1))
    e0 = np.where((n_positive >= 2) & np.isfinite(slope), slope, LLOYD_TAYLOR_E0_KELVIN)
    e0 = np.clip(e0, 10.0, 1000.0)
    shape = np.where(mask, np.exp(e0[:, None] * term), 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        rref = np.sum(shape * flux, axis=1) / np.sum(shape * shape, axis=1)
    rref = np.where(np.isfinite(rref) & (counts > 0), rref, 1.0)
    return rref, e0


def _fit_lloyd_taylor(temperature, flux, mask, counts):
    """Least-squares (Rref, E0) of Lloyd–Taylor for many windows at once.

    Levenberg–Marquardt with Marquardt's diagonal scaling and the analytic
    Jacobian of :func:`~fluxpart.responses.lloyd_taylor_derivatives`; each window
    has its own damping and stops on its own. Returns estimates, standard errors
    from ``s² (JᵀJ)⁻¹`` with ``s² = SSR / (n - 2)``, and a convergence flag.
    """
    rref, e0 = _initial_guess(temperature, flux, mask, counts)
    damping = np.full(rref.shape, _LM_LAMBDA_START)
    done = counts < 2
    converged = np.zeros(rref.shape, dtype=bool)
    ssr, residual, d_rref, d_e0 = _sum_of_squares(temperature, flux, mask, rref, e0)
    # each window's arithmetic is its own row, so only the windows still running are
    # computed (the rows of finished windows would only be carried along unchanged)
    for _ in range(_LM_MAX_ITERATIONS):
        rows = np.flatnonzero(~done)
        if rows.size == 0:
            break
        row_d_rref, row_d_e0, row_residual = d_rref[rows], d_e0[rows], residual[rows]
        row_rref, row_e0, row_ssr = rref[rows], e0[rows], ssr[rows]
        a = np.sum(row_d_rref * row_d_rref, axis=1)
        b = np.sum(row_d_rref * row_d_e0, axis=1)
        c = np.sum(row_d_e0 * row_d_e0, axis=1)
        g_rref = np.sum(row_d_rref * row_residual, axis=1)
        g_e0 = np.sum(row_d_e0 * row_residual, axis=1)
        scale = 1.0 + damping[rows]
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            det = a * c * scale * scale - b * b
            step_rref = (g_rref * c * scale - b * g_e0) / det
            step_e0 = (a * scale * g_e0 - b * g_rref) / det
        trial_rref, trial_e0 = row_rref + step_rref, row_e0 + step_e0
        trial = _sum_of_squares(temperature[rows], flux[rows], mask[rows], trial_rref,
                                trial_e0)
        better = np.isfinite(trial[0]) & (trial[0] <= row_ssr)
        small_step = ((np.abs(step_rref) <= _LM_XTOL * (np.abs(row_rref) + _LM_XTOL))
                      & (np.abs(step_e0) <= _LM_XTOL * (np.abs(row_e0) + _LM_XTOL)))
        small_gain = better & (row_ssr - trial[0] <= _LM_FTOL * row_ssr)
        accepted = rows[better]
        rref[accepted] = trial_rref[better]
        e0[accepted] = trial_e0[better]
        ssr[accepted] = trial[0][better]
        residual[accepted] = trial[1][better]
        d_rref[accepted] = trial[2][better]
        d_e0[accepted] = trial[3][better]
        damping[rows] = np.where(better, damping[rows] / 10.0, damping[rows] * 10.0)
        newly = rows[(better & (small_step | small_gain)) | (damping[rows] > _LM_LAMBDA_GIVE_UP)]
        converged[newly] = True
        done[newly] = True
    a = np.sum(d_rref * d_rref, axis=1)
    b = np.sum(d_rref * d_e0, axis=1)
    c = np.sum(d_e0 * d_e0, axis=1)
    dof = counts - 2
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        variance = np.where(dof > 0, ssr / np.maximum(dof, 1), np.nan)
        det = a * c - b * b
        rref_se = np.sqrt(variance * c / det)
        e0_se = np.sqrt(variance * a / det)
    converged &= np.isfinite(rref) & np.isfinite(e0) & np.isfinite(ssr)
    return rref, e0, rref_se, e0_se, converged


# --------------------------------------------------------------------------- #
# E0 windows
# --------------------------------------------------------------------------- #
def _usable(nee, temperature, is_night):
    """Night records with measured NEE and a temperature above T0.

    At or below T0 (-46.02 °C) Lloyd & Taylor's (1994) eq. 11 has no respiration left
    to fit: its limit there is 0, and below it ``1/(T - T0)`` changes sign, so such a
    record's temperature term turned large and positive (+11.7 K-1 at 0.09 K below T0)
    and dominated the E0 profile (found on a fictional Siberian record, review round
    ten). Since 0.17.0 these records are left out of every nighttime fit.
    """
    kelvin = np.asarray(temperature, dtype=float) + KELVIN_OFFSET
    with np.errstate(invalid="ignore"):
        above_t0 = kelvin > LLOYD_TAYLOR_T0_KELVIN
    return is_night & np.isfinite(nee) & np.isfinite(temperature) & above_t0


def fit_e0_windows(index, nee, temperature, is_night, *, e0_window_days=15.0,
                   e0_window_step_days=5.0, e0_min_points=6, e0_min_temperature_range=5.0,
                   e0_bounds=(30.0, 450.0), e0_max_relative_error=0.5,
                   breaks=None) -> pd.DataFrame:
    """Fit Lloyd–Taylor (Rref, E0) to measured night NEE in short moving windows.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time, increasing.
    nee : array_like
        Measured NEE [µmol m-2 s-1]; NaN where not measured or rejected (e.g. by
        the u* filter). Gap-filled values must not be passed here.
    temperature : array_like
        Measured driving temperature, air or soil [°C]; NaN where missing.
    is_night : array_like of bool
        True for night records.
    e0_window_days : float, optional
        Window length [days]; 15 days, Reichstein et al. (2005) (m).
    e0_window_step_days : float, optional
        Step between window starts [days]; 5 days (m).
    e0_min_points : int, optional
        Fewest usable night records for a window to be judged; 6 (m).
    e0_min_temperature_range : float, optional
        Smallest range of temperature among a window's records [K]; 5 K,
        Reichstein et al. (2005).
    e0_bounds : tuple of float, optional
        Accepted E0 [K]; (30, 450) K, Reichstein et al. (2005) (m).
    e0_max_relative_error : float, optional
        Largest accepted ``e0_se / e0`` [1]; 0.5, our choice.
    breaks : array_like of int, optional
        Record positions where a declared event starts a new piece of the record
        (:func:`fluxpart.gapfill.event_breaks` of ``Config.events``): each window is
        cut to the piece holding its centre
        (:func:`fluxpart.partition.pieces.centre_piece_windows`), so its records lie
        on one side of every event.
        Default None: no events, the windows as without this argument.

    Returns
    -------
    pandas.DataFrame
        One row per window, in time order, with columns ``window_start``,
        ``window_end`` (exclusive), ``window_centre`` (timestamps), ``year`` (int,
        calendar year of the centre), ``points`` (usable night records),
        ``temperature_range`` [K], ``e0`` [K], ``e0_se`` [K], ``rref``
        [µmol m-2 s-1], ``rref_se`` [µmol m-2 s-1], ``accepted`` (bool) and
        ``reason`` (str; empty for accepted windows, else the first rule the
        window failed).

    Raises
    ------
    InsufficientDataError
        If there is no usable night record at all.
    ConfigError
        For an invalid setting.

    Notes
    -----
    Windows start at local noon at or before the first record (so none splits a
    night) and every `e0_window_step_days` after, until the last window reaches
    the end of the record; a calendar year of records gives 72 windows at the
    defaults. They cross year boundaries freely. A usable record is a night
    record with finite NEE and temperature.

    The model is ``NEE = Rref exp(E0 (1/(Tref - T0) - 1/(T - T0)))``, Lloyd &
    Taylor (1994) eq. 11, Tref = 283.15 K, T0 = 227.13 K. All windows are fitted
    at once by a batched Levenberg–Marquardt least-squares fit over padded
    arrays with the analytic Jacobian; standard errors come from
    ``s² (JᵀJ)⁻¹``, ``s² = SSR / (n - 2)``, as for an unweighted nonlinear
    least-squares fit. Windows with at least three records are fitted even when
    they fail a rule, so their estimates stay visible.

    Rules, checked in this order (the first failure is the ``reason``): at least
    `e0_min_points` records; temperature range at least
    `e0_min_temperature_range`; fit converged with finite standard errors; E0
    within `e0_bounds`; Rref positive; ``e0_se / e0`` at most
    `e0_max_relative_error`.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439,
    doi:10.1111/j.1365-2486.2005.001002.x, section "Nighttime-based approach"
    and appendix (m).

    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    index = _check_index(index)
    length = len(index)
    nee = _as_float("nee", nee, length)
    temperature = _as_temperature("temperature", temperature, length)
    is_night = _as_night("is_night", is_night, length)
    window_seconds = _check_positive("e0_window_days", e0_window_days) * _SECONDS_PER_DAY
    step_seconds = _check_positive("e0_window_step_days", e0_window_step_days) * _SECONDS_PER_DAY
    min_points = _check_count("e0_min_points", e0_min_points)
    min_range = _check_positive("e0_min_temperature_range", e0_min_temperature_range)
    low, high = _check_bounds(e0_bounds)
    max_relative = _check_positive("e0_max_relative_error", e0_max_relative_error)

    usable = _usable(nee, temperature, is_night)
    if not usable.any():
        raise InsufficientDataError(
            f"E0 fit: no usable night record among {length} records ({int(is_night.sum())} "
            "night records; every one lacks measured NEE or temperature). Nighttime "
            "partitioning needs measured night NEE and temperature.")

    anchor = _window_anchor(index)
    seconds = _seconds_since(index, anchor)
    end = _record_end_seconds(seconds)
    n_windows = max(1, math.ceil((end - window_seconds) / step_seconds) + 1)
    starts = np.arange(n_windows) * step_seconds
    edges = pieces.break_times(seconds, breaks)
    ends = starts + window_seconds
    if len(edges):
        starts, ends = pieces.centre_piece_windows(starts, ends, edges)
    point_seconds = seconds[usable]
    lo = np.searchsorted(point_seconds, starts, side="left")
    hi = np.searchsorted(point_seconds, ends, side="left")
    counts, mask, (temp_pad, flux_pad) = _gather(lo, hi, temperature[usable], nee[usable])

    with np.errstate(invalid="ignore"):
        t_max = np.where(mask, temp_pad, -np.inf).max(axis=1)
        t_min = np.where(mask, temp_pad, np.inf).min(axis=1)
    temperature_range = np.where(counts > 0, t_max - t_min, np.nan)

    fit = counts >= 3
    rref = np.full(n_windows, np.nan)
    e0 = np.full(n_windows, np.nan)
    rref_se = np.full(n_windows, np.nan)
    e0_se = np.full(n_windows, np.nan)
    converged = np.zeros(n_windows, dtype=bool)
    if fit.any():
        results = _fit_lloyd_taylor(np.where(mask[fit], temp_pad[fit], 10.0), flux_pad[fit],
                                    mask[fit], counts[fit])
        rref[fit], e0[fit], rref_se[fit], e0_se[fit], converged[fit] = results

    with np.errstate(invalid="ignore", divide="ignore"):
        relative_error = e0_se / np.abs(e0)
    reason = np.select(
        [counts < min_points,
         ~(temperature_range >= min_range),
         ~converged | ~np.isfinite(e0_se) | ~np.isfinite(rref_se),
         (e0 < low) | (e0 > high),
         ~(rref > 0),
         ~(relative_error <= max_relative)],
        [f"too few night records (< {min_points})",
         f"temperature range below {min_range:g} K",
         "fit did not converge or standard error undefined",
         f"E0 outside {low:g}-{high:g} K",
         "Rref not positive",
         f"E0 relative standard error above {max_relative:g}"],
        default="")
    columns = {"points": counts.astype("int64"), "temperature_range": temperature_range,
               "e0": e0, "e0_se": e0_se, "rref": rref, "rref_se": rref_se,
               "accepted": reason == "", "reason": pd.Series(reason, dtype="str")}
    if len(edges):
        frame = _bounded_frame(anchor, starts, ends, **columns)
        frame.insert(3, "year", pd.DatetimeIndex(frame["window_centre"]).year.to_numpy()
                     .astype("int64"))
        return frame
    centres = anchor + pd.to_timedelta(starts, unit="s") \
        + pd.Timedelta(seconds=float(window_seconds)) / 2
    return _window_frame(anchor, starts, window_seconds,
                         year=centres.year.to_numpy().astype("int64"),
                         points=counts.astype("int64"), temperature_range=temperature_range,
                         e0=e0, e0_se=e0_se, rref=rref, rref_se=rref_se,
                         accepted=reason == "", reason=pd.Series(reason, dtype="str"))


# --------------------------------------------------------------------------- #
# Joint E0: one E0 per year with Rref free in every Rref window
# --------------------------------------------------------------------------- #
_JOINT_GRID_STEP = 1.0     # K, resolution of the profile search (our choice)
_JOINT_COARSE_STRIDE = 5   # the search first steps 5 K, then 1 K around the best (our choice)
_JOINT_JACKKNIFE_REACH = 40.0   # K around the best coarse E0 searched at 1 K (our choice)
# grid values x records per block of the E0 profile: 128 KiB per temporary array, which
# stays in the CPU cache and is reused from the heap block after block (our choice)
_PROFILE_BLOCK_ELEMENTS = 1 << 14


def fit_e0_joint(index, nee, temperature, is_night, *, e0_window_days=15.0,
                 e0_min_points=6, e0_bounds=(30.0, 450.0),
                 e0_max_relative_error=0.5, breaks=None) -> pd.DataFrame:
    """One E0 per calendar year, fitted jointly with a free Rref in every short window.

    The fit is the Laplace maximum likelihood (least absolute deviations).

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time, increasing.
    nee : array_like
        Measured NEE [µmol m-2 s-1]; NaN where not measured or rejected.
    temperature : array_like
        Measured driving temperature [°C]; NaN where missing.
    is_night : array_like of bool
        True for night records.
    e0_window_days : float, optional
        Length of the consecutive windows that each have their own Rref
        [days]; 15 days, the E0 window of Reichstein et al. (2005) (m).
    e0_min_points : int, optional
        Fewest usable night records for a window to take part; 6 (m), as in
        :func:`fit_e0_windows`.
    e0_bounds : tuple of float, optional
        Range searched for E0 [K]; a minimum on a bound is not accepted.
    e0_max_relative_error : float, optional
        Largest accepted ``e0_se / e0`` [1].
    breaks : array_like of int, optional
        Record positions where a declared event starts a new piece of the record
        (:func:`fluxpart.gapfill.event_breaks` of ``Config.events``): a window an
        event falls in has one Rref on each side of it (a harvest changes respiration
        at once, which one Rref across it would read as a temperature response).
        Default None: no events, the windows as without this argument.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``year`` (int), columns ``e0`` [K], ``e0_se`` [K],
        ``windows`` (windows in the fit), ``points`` (night records),
        ``accepted`` (bool) and ``reason`` (str, empty when accepted).

    Notes
    -----
    The windows are the E0 windows of :func:`fit_e0_windows` laid end to end
    (consecutive, not overlapping). The model is Lloyd & Taylor (1994) eq. 11
    with one E0 per year and one Rref per window,
    ``NEE_i = Rref_w exp(E0 (1/(Tref - T0) - 1/(T_i - T0)))``, fitted by
    maximum likelihood under Laplace (double-exponential) errors, i.e. least
    absolute deviations: the random error of eddy-covariance fluxes is closer to
    a Laplace than to a normal distribution (Hollinger & Richardson 2005;
    Richardson et al. 2006), and Richardson & Hollinger (2005) fitted
    respiration models to night NEE by this likelihood. For a given E0 each
    Rref_w is the f-weighted median of ``NEE/f`` in its window, so the sum of
    absolute deviations is profiled over E0 within `e0_bounds`, on a 5 K grid
    and then 1 K around its minimum.

    Because every window has its own Rref, only the temperature variation
    *within* windows informs E0: the short-term sensitivity that Reichstein et
    al. (2005) sought with short windows, free of the seasonal co-variation of
    Rref (phenology, moisture) and temperature. Unlike the mean of the few
    windows with the smallest standard error, it uses every window, weighted
    by the information it holds (its temperature spread and record count), so
    no window needs a minimum temperature range, and it does not select the
    windows whose noise happens to flatten the curve: a flatter fit has a
    smaller standard error, so that choice biases E0 low. The median fit also
    gives an occasional outlier or a night of u*-related loss that the filter
    let through less weight than a least-squares fit would.

    Standard error: the larger of the asymptotic one of the Laplace estimate,
    ``b² (JᵀJ)⁻¹`` with ``b = Σ|residual| / (n - w - 1)`` for n records in w
    windows (the E0 element of ``(JᵀJ)⁻¹`` from the Schur complement of the
    windows' Rref block), and the delete-one-window jackknife (Efron & Stein
    1981), which also holds the autocorrelation of night residuals within a
    window and differences between windows that the asymptotic form ignores.
    Leaving one window out only drops its column from the profile, so the
    jackknife costs no refit; its values are searched within 40 K of the
    estimate, at the grid's 1 K resolution.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.

    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.

    Richardson, A. D. & Hollinger, D. Y. (2005). Statistical modeling of ecosystem
    respiration using eddy covariance data: maximum likelihood parameter
    estimation, and Monte Carlo simulation of model and parameter uncertainty.
    Agricultural and Forest Meteorology 131:191–208. (m)

    Efron, B. & Stein, C. (1981). The jackknife estimate of variance. Annals of
    Statistics 9:586–596. (m)

    Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology
    25:873–885. (m)

    Richardson, A. D. et al. (2006). Agricultural and Forest Meteorology
    136:1–18. doi:10.1016/j.agrformet.2006.01.007
    """
    index = _check_index(index)
    length = len(index)
    nee = _as_float("nee", nee, length)
    temperature = _as_temperature("temperature", temperature, length)
    is_night = _as_night("is_night", is_night, length)
    window_seconds = _check_positive("e0_window_days", e0_window_days) * _SECONDS_PER_DAY
    min_points = _check_count("e0_min_points", e0_min_points)
    low, high = _check_bounds(e0_bounds)
    max_relative = _check_positive("e0_max_relative_error", e0_max_relative_error)

    usable = _usable(nee, temperature, is_night)
    seconds = _seconds_since(index, _window_anchor(index))
    window = np.floor(seconds / window_seconds)
    edges = pieces.break_times(seconds, breaks)
    if len(edges):
        # one key per (piece, window), increasing in time: pieces and windows both are
        window = np.searchsorted(edges, seconds, side="right") * (window.max() + 1) + window
    years = index.year.to_numpy()
    grid = np.arange(low, high + 0.5 * _JOINT_GRID_STEP, _JOINT_GRID_STEP)
    rows = []
    # the stamps increase, so each calendar year is one slice of the record: the year's
    # records are taken from its slice, not by a pass over the whole record per year
    # (O(records x years)); the same records in the same order, so the same bits
    year_list = np.unique(years)
    bounds = np.searchsorted(years, np.r_[year_list, year_list[-1] + 1], side="left")
    for year, first, last in zip(year_list, bounds[:-1], bounds[1:], strict=True):
        part = slice(first, last)
        chosen = usable[part]
        part_window = window[part]
        keys, counts = np.unique(part_window[chosen], return_counts=True)
        enough = np.isin(part_window, keys[counts >= min_points]) & chosen
        flux = nee[part][enough]
        term = _temperature_term(temperature[part][enough])
        starts = np.flatnonzero(np.r_[True, np.diff(part_window[enough]) != 0])
        rows.append((int(year), *_profile_e0(flux, term, starts, grid, max_relative)))
    return _year_table(rows, {"year": "int64", "e0": "float64", "e0_se": "float64",
                              "windows": "int64", "points": "int64", "accepted": "bool",
                              "reason": "str"})


def _year_table(rows, dtypes) -> pd.DataFrame:
    """One row per year from tuples in the order of `dtypes` (column -> dtype), by year."""
    columns = dict(zip(dtypes, list(zip(*rows, strict=True)) if rows else [()] * len(dtypes),
                       strict=True))
    year = pd.Index(np.array(columns.pop("year"), dtype=dtypes["year"]), name="year")
    return pd.DataFrame({
        name: pd.array(list(values), dtype="str") if dtypes[name] == "str"
        else np.array(values, dtype=dtypes[name])
        for name, values in columns.items()
    }, index=year)


def _absolute_deviation_profile(flux, term, starts, grid):
    """Least absolute deviations of every grid E0, each window's Rref at its optimum.

    For a fixed E0 the model is ``flux = Rref_w f`` with ``f > 0``, and
    ``Σ |flux - Rref f| = Σ f |flux/f - Rref|`` is smallest at the
    f-weighted median of ``flux/f`` in each window. Returns the sum of
    absolute deviations and the Rref per grid value and window.

    The grid values are taken a few at a time (blocks of at most
    ``_PROFILE_BLOCK_ELEMENTS`` grid values x records): each grid value's row is
    computed on its own, so the blocks give the same numbers as one pass, while the
    temporary arrays stay small enough for the CPU cache and are reused block after
    block; one pass over a year's night records allocated ~35 MB per call, which a
    fresh process mostly got as new pages from the kernel.
    """
    sizes = np.diff(np.r_[starts, flux.size])
    window = np.repeat(np.arange(starts.size), sizes)
    rows = max(1, _PROFILE_BLOCK_ELEMENTS // max(flux.size, 1))
    blocks = [_deviation_rows(flux, term, starts, sizes, window, grid[first:first + rows])
              for first in range(0, max(grid.size, 1), rows)]
    if len(blocks) == 1:
        return blocks[0]
    return (np.concatenate([deviation for deviation, _ in blocks]),
            np.concatenate([rref for _, rref in blocks]))


def _order_ties(order, key_sorted, ratio_sorted, weight_sorted) -> np.ndarray:
    """Put equal keys whose values differ in position order, as a stable sort does.

    :func:`_deviation_rows` sorts each row by NumPy's default sort (introsort, vectorised
    on CPUs with AVX2 or AVX-512: about three times faster than the stable merge sort on
    a year's night records), which leaves records of equal key in any order. Records of
    distinct keys have one sorted order whatever the sort, and a run of equal keys that
    all hold the same (ratio, weight) bits gives the same sorted values in any order; only
    a run whose members differ (a zero flux at several temperatures: ratio 0, weights
    apart) must be in position order, the stable sort's order, for the cumulative weights
    to keep their bits. Those runs are put in position order here; a row with a NaN key
    (NaNs sort last, unequal to each other) is put in key, then position order.

    Parameters
    ----------
    order : numpy.ndarray
        int (rows x records): flat positions of the records in an ascending order of the
        key, row by row; changed in place.
    key_sorted, ratio_sorted, weight_sorted : numpy.ndarray
        The sort key, the ratio flux / f [µmol m-2 s-1] and the weight f [1] of each
        record, float (rows x records), in the order `order`.

    Returns
    -------
    numpy.ndarray
        The rows of `order` that changed (their sorted values are to be taken again).

    References
    ----------
    Knuth, D. E. (1998). The Art of Computer Programming, vol. 3: Sorting and
    Searching, 2nd ed., chapter 5 (a stable sort keeps the order of records with
    equal keys; records of distinct keys have one sorted order) (m).
    """
    if key_sorted.shape[1] < 2:
        return np.zeros(0, dtype=np.int64)
    nan = np.isnan(key_sorted[:, -1])
    tie = key_sorted[:, 1:] == key_sorted[:, :-1]
    rows = np.flatnonzero(tie.any(axis=1) & ~nan)
    changed = [np.flatnonzero(nan)]
    if rows.size:
        tie = tie[rows]
        ratio_bits = ratio_sorted[rows].view(np.int64)
        weight_bits = weight_sorted[rows].view(np.int64)
        differ = tie & ((ratio_bits[:, 1:] != ratio_bits[:, :-1])
                        | (weight_bits[:, 1:] != weight_bits[:, :-1]))
        if differ.any():
            # runs of equal keys, numbered over the rows in sorted order
            first = np.ones((rows.size, key_sorted.shape[1]), dtype=bool)
            first[:, 1:] = ~tie
            run = np.cumsum(first.ravel()) - 1
            mixed = np.zeros(run[-1] + 1, dtype=bool)
            mixed[run.reshape(first.shape)[:, 1:][differ]] = True
            members = np.flatnonzero(mixed[run])
            part = order[rows]
            flat = part.ravel()
            positions = flat[members]
            flat[members] = positions[np.lexsort((positions, run[members]))]
            order[rows] = part
            changed.append(rows[differ.any(axis=1)])
    if nan.any():
        # by key, equal keys and NaNs by position: NumPy's stable sorts order NaNs last,
        # as equal to each other
        part = order[nan]
        order[nan] = np.take_along_axis(
            part, np.lexsort((part, key_sorted[nan]), axis=-1), axis=1)
    return np.concatenate(changed)


def _deviation_rows(flux, term, starts, sizes, window, grid):
    """:func:`_absolute_deviation_profile` of the grid values `grid` (one block)."""
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        shape = np.exp(grid[:, None] * term[None, :])
        ratio = flux[None, :] / shape
    # a factor that underflows to 0 (a record within a kelvin or so of T0 = -46.02 °C at a
    # large E0) weighs nothing in the weighted median; its ratio is set to 0, not inf, so
    # that the sums below stay finite (inf - inf gave NaN deviations and NumPy warnings)
    ratio[shape == 0.0] = 0.0
    # sort by window, then ratio (arctan maps the ratio monotonically into (0, 1));
    # the key is window + (0.5 + arctan(ratio) / pi) * 0.999, built in place
    key = np.arctan(ratio)
    key /= np.pi
    key += 0.5
    key *= 0.999
    key += window
    order = np.argsort(key, axis=1)     # ties in any order: put in position order below
    order += (np.arange(grid.size) * flux.size)[:, None]    # positions in the flat arrays
    ratio_sorted = ratio.take(order)
    weight_sorted = shape.take(order)
    rows = _order_ties(order, key.take(order), ratio_sorted, weight_sorted)
    if rows.size:
        ratio_sorted[rows] = ratio.take(order[rows])
        weight_sorted[rows] = shape.take(order[rows])
    cumulative = np.cumsum(weight_sorted, axis=1)
    before = np.concatenate([np.zeros((grid.size, 1)), cumulative[:, starts[1:] - 1]], axis=1)
    within = cumulative - np.repeat(before, sizes, axis=1)
    half = np.add.reduceat(weight_sorted, starts, axis=1)
    half *= 0.5
    below_half = within < np.repeat(half, sizes, axis=1)
    position = starts[None, :] + np.add.reduceat(below_half, starts, axis=1)
    rref = np.take_along_axis(ratio_sorted, np.minimum(position, flux.size - 1), axis=1)
    residual = np.repeat(rref, sizes, axis=1)
    residual *= shape
    np.subtract(flux[None, :], residual, out=residual)
    np.abs(residual, out=residual)
    deviation = np.add.reduceat(residual, starts, axis=1)
    return deviation, rref


def _profile_e0(flux, term, starts, grid, max_relative):
    """Laplace maximum-likelihood E0 over `grid` (windows contiguous from `starts`)."""
    windows, points = len(starts), len(flux)
    dof = points - windows - 1
    if windows == 0 or dof < 1:
        return np.nan, np.nan, windows, points, False, "too few night records"
    coarse = grid[::_JOINT_COARSE_STRIDE]
    coarse_windows, coarse_rref = _absolute_deviation_profile(flux, term, starts, coarse)
    if not np.isfinite(coarse_windows).all():
        return np.nan, np.nan, windows, points, False, "fit did not converge"
    centre = coarse[int(np.argmin(coarse_windows.sum(axis=1)))]
    chosen = np.flatnonzero(np.abs(grid - centre) <= _JOINT_JACKKNIFE_REACH)
    fine = grid[chosen]
    # each grid value's row is computed on its own: the coarse values in the fine
    # range are taken from the coarse pass, the others computed
    on_coarse = chosen % _JOINT_COARSE_STRIDE == 0
    new_windows, new_rref = _absolute_deviation_profile(flux, term, starts,
                                                        fine[~on_coarse])
    per_window = np.empty((fine.size, windows))
    rref = np.empty((fine.size, windows))
    per_window[on_coarse] = coarse_windows[chosen[on_coarse] // _JOINT_COARSE_STRIDE]
    rref[on_coarse] = coarse_rref[chosen[on_coarse] // _JOINT_COARSE_STRIDE]
    per_window[~on_coarse], rref[~on_coarse] = new_windows, new_rref
    deviation = per_window.sum(axis=1)
    best = int(np.argmin(deviation))
    e0 = float(fine[best])
    if e0 <= grid[0] or e0 >= grid[-1]:
        return (e0, np.nan, windows, points, False,
                f"E0 at a bound of {grid[0]:g}-{grid[-1]:g} K")
    # delete-one-window jackknife: the profile is a sum over windows, so leaving
    # window w out is the profile minus its column
    left_out = fine[np.argmin(deviation[:, None] - per_window, axis=0)]
    jackknife_se = float(np.sqrt((windows - 1) / windows
                                 * np.sum((left_out - left_out.mean()) ** 2)))
    # asymptotic covariance of the Laplace ML estimate: b² (JᵀJ)⁻¹, b = mean |residual|;
    # the E0 element of (JᵀJ)⁻¹ by the Schur complement of the per-window Rref block
    sizes = np.diff(np.r_[starts, points])
    window = np.repeat(np.arange(windows), sizes)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        shape = np.exp(e0 * term)
        d_rref = shape
        d_e0 = rref[best][window] * shape * term
        schur = (np.sum(d_e0 * d_e0) - np.sum(np.add.reduceat(d_e0 * d_rref, starts) ** 2
                                              / np.add.reduceat(d_rref * d_rref, starts)))
        scale = deviation[best] / dof
        asymptotic_se = float(scale * np.sqrt(1.0 / schur)) if schur > 0 else np.nan
    e0_se = max(asymptotic_se, jackknife_se) if windows > 1 else asymptotic_se
    if not np.isfinite(e0_se):
        return e0, e0_se, windows, points, False, "standard error undefined"
    if e0_se / e0 > max_relative:
        return (e0, e0_se, windows, points, False,
                f"E0 relative standard error above {max_relative:g}")
    return e0, e0_se, windows, points, True, ""


# --------------------------------------------------------------------------- #
# Annual E0
# --------------------------------------------------------------------------- #
def annual_e0(windows: pd.DataFrame, *, e0_best_windows=3, e0_fallback=None,
              night_records=None, joint=None, nearest_year=False) -> pd.DataFrame:
    """E0 of each calendar year: the joint fit, else the best accepted E0 windows.

    Parameters
    ----------
    windows : pandas.DataFrame
        Output of :func:`fit_e0_windows`.
    e0_best_windows : int, optional
        How many accepted windows with the smallest ``e0_se`` are averaged; 3,
        Reichstein et al. (2005) (m). Fewer are used when fewer are accepted.
    e0_fallback : float or None, optional
        E0 [K] for a year without any accepted window, flagged ``"fallback"``.
        ``None`` (default) makes such a year an error.
    night_records : pandas.Series, optional
        Usable night records per calendar year (index: int year), as counted by
        :func:`partition_nighttime`. Its index lists the years that need an E0;
        without it, the years of the window centres are used.
    joint : pandas.DataFrame, optional
        Output of :func:`fit_e0_joint`. A year whose joint fit is accepted takes
        its E0 (``source = "joint"``); the other years fall back to the windows.
    nearest_year : bool, optional
        When True and `e0_fallback` is None, a year without an E0 of its own (no
        accepted joint fit and no accepted window) takes the E0 of the nearest year
        that has one (the earlier on a tie), ``source = "nearest_year"``; its
        ``e0_se`` is the donor's and its ``windows_used`` 0. Default False: such a
        year is an error, as before (see Notes).

    Returns
    -------
    pandas.DataFrame
        Indexed by ``year`` (int), with columns ``e0`` [K], ``e0_se`` [K] (NaN
        for a fall-back), ``windows_accepted``, ``windows_used``,
        ``windows_tried`` (candidate windows of the year), ``night_records``
        (``-1`` when not given) and ``source`` (``"joint"``, ``"fitted"`` for
        the mean of the best windows, ``"fallback"``, or ``"nearest_year"`` for
        an E0 taken from another year, see `nearest_year`). For a joint year
        ``windows_used`` counts the Rref windows of the joint fit.

    Raises
    ------
    InsufficientDataError
        If a year has no accepted window and `e0_fallback` is None (and, with
        `nearest_year`, no other year has an E0 of its own); the message names the
        year, its night records, the windows tried and why they were rejected, and
        the setting ``e0_fallback``.

    Notes
    -----
    A year's candidates are the windows whose centre falls in it. A year the
    record touches so briefly that no window is centred in it (e.g. a record that
    starts on 30 December) takes the windows overlapping it instead.

    A year with an accepted joint fit (:func:`fit_e0_joint`) takes it. Otherwise
    the year's E0 is the plain (unweighted) mean of the best
    ``min(e0_best_windows, accepted)`` windows, as in Reichstein et al. (2005)
    (m); its standard error is ``sqrt(sum(se²)) / k``, the standard error of that
    mean if the windows were independent. Overlapping windows share records, so
    this understates the uncertainty somewhat.

    Nearest year (`nearest_year`, our choice): E0 describes how the respiration of
    one ecosystem responds to temperature; within a record of one site it changes
    with the seasons' conditions but is a property of the same soil and vegetation.
    A year that is too short (a stub of a few days at the record's edge, e.g. 1–9
    January after a full year) or too poor in night data to estimate its own E0 is
    therefore closer to its neighbouring year's E0 than to a value typical of
    ecosystems in general (``e0_fallback``), and is named with its donor in the
    run's warnings (:func:`nearest_year_notes`). The donor's standard error
    understates the borrowed year's E0 uncertainty by the year-to-year change
    that is not known.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.
    """
    best = _check_count("e0_best_windows", e0_best_windows)
    if e0_fallback is not None:
        e0_fallback = _check_positive("e0_fallback", e0_fallback)
    missing = {"window_start", "window_end", "year", "points", "e0", "e0_se", "accepted",
               "reason"} - set(windows.columns)
    if missing:
        raise FluxpartError(f"windows: missing columns {sorted(missing)}; pass the output "
                            "of fit_e0_windows")
    if night_records is None:
        years = sorted(int(y) for y in windows["year"].unique())
        counts = dict.fromkeys(years, -1)
    else:
        counts = {int(y): int(n) for y, n in night_records.items()}
        years = sorted(counts)
    rows, lacking = [], {}
    for year in years:
        candidates = windows[windows["year"] == year]
        if candidates.empty:
            year_start, year_end = pd.Timestamp(year, 1, 1), pd.Timestamp(year + 1, 1, 1)
            candidates = windows[(windows["window_start"] < year_end)
                                 & (windows["window_end"] > year_start)]
        accepted = candidates[candidates["accepted"]]
        if joint is not None and year in joint.index and bool(joint.loc[year, "accepted"]):
            rows.append((year, float(joint.loc[year, "e0"]), float(joint.loc[year, "e0_se"]),
                         len(accepted), int(joint.loc[year, "windows"]), len(candidates),
                         counts[year], "joint"))
            continue
        if accepted.empty:
            if e0_fallback is None and nearest_year:
                lacking[year] = candidates         # decided once every year is known
                continue
            if e0_fallback is None:
                raise InsufficientDataError(_no_e0_message(year, counts[year], candidates))
            rows.append((year, e0_fallback, np.nan, 0, 0, len(candidates), counts[year],
                         "fallback"))
            continue
        chosen = accepted.sort_values(["e0_se", "window_start"], kind="stable").head(best)
        k = len(chosen)
        e0 = float(chosen["e0"].mean())
        e0_se = float(np.sqrt(np.sum(chosen["e0_se"].to_numpy() ** 2)) / k)
        rows.append((year, e0, e0_se, len(accepted), k, len(candidates), counts[year],
                     "fitted"))
    if lacking:
        rows = sorted(rows + _nearest_year_rows(rows, lacking, counts))
    return _year_table(rows, {"year": "int64", "e0": "float64", "e0_se": "float64",
                              "windows_accepted": "int64", "windows_used": "int64",
                              "windows_tried": "int64", "night_records": "int64",
                              "source": "str"})


def _nearest_year_rows(rows: list, lacking: dict, counts: dict) -> list:
    """Rows of the years in `lacking` (year -> its candidate windows), each with the E0
    and standard error of the nearest year of `rows` (the earlier on a tie); raises as
    :func:`annual_e0` does where `rows` is empty."""
    if not rows:
        year = min(lacking)
        raise InsufficientDataError(_no_e0_message(year, counts[year], lacking[year]))
    own = {row[0]: row for row in rows}
    donors = np.array(sorted(own), dtype=np.int64)
    out = []
    for year, candidates in lacking.items():
        distance = np.abs(donors - year)
        donor = own[int(donors[np.flatnonzero(distance == distance.min())[0]])]
        out.append((year, donor[1], donor[2], 0, 0, len(candidates), counts[year],
                    "nearest_year"))
    return out


def nearest_year_notes(e0_annual: pd.DataFrame, respiration_driver: str) -> list:
    """Warnings naming each year whose E0 was taken from another year, and that year.

    Parameters
    ----------
    e0_annual : pandas.DataFrame
        Output of :func:`annual_e0` (``source`` ``"nearest_year"`` marks a borrowed E0).
    respiration_driver : str
        Name of the driving temperature, for the text.

    Returns
    -------
    list of str
        One text per borrowed year; empty where none was borrowed.
    """
    if "source" not in e0_annual.columns:
        return []
    own = e0_annual[~e0_annual["source"].isin(["nearest_year"])]
    notes = []
    for year, row in e0_annual[e0_annual["source"] == "nearest_year"].iterrows():
        # the donor: the nearest year with its own E0 (the earlier on a tie), as chosen
        donors = np.asarray(own.index, dtype=np.int64)
        distance = np.abs(donors - int(year))
        donor = int(donors[np.flatnonzero(distance == distance.min())[0]])
        records = int(row["night_records"])
        notes.append(
            f"nighttime partitioning: calendar year {year} (E0 is fitted per calendar year) "
            f"is too short or has too few measured night "
            f"records ({records if records >= 0 else 'an unknown number of'} usable, "
            f"{int(row['windows_tried'])} E0 windows tried, none accepted) to estimate its "
            f"own temperature sensitivity on {respiration_driver}: E0 of {donor}, the "
            f"nearest year with one ({float(row['e0']):.0f} K), was used for {year}, "
            "flagged 'nearest_year' in the nighttime E0 table")
    return notes


def _no_e0_message(year: int, night_records: int, candidates: pd.DataFrame) -> str:
    records = (f"{night_records} usable night records" if night_records >= 0
               else "an unknown number of night records")
    reasons = Counter(candidates["reason"])
    detail = "; ".join(f"{reason}: {count}" for reason, count in sorted(reasons.items()))
    return (f"E0 for year {year}: no acceptable Lloyd–Taylor window ({records} in the year, "
            f"{len(candidates)} windows tried; rejected because {detail or 'no window'}). "
            + NO_E0_ADVICE)


#: The closing sentences of the error of a year without an acceptable E0 window: true
#: where the run's own temperature fails; a caller that fits another temperature instead
#: (``temperature_choice``: soil temperature failed, air temperature fitted) strips them
#: with :func:`without_no_e0_advice`, as the run then needs no ``e0_fallback``.
NO_E0_ADVICE = ("Nighttime partitioning cannot estimate the temperature sensitivity from "
                "these data. Set e0_fallback (a fixed E0 in K, in [processing]) to use a "
                "flagged fall-back value for such years, or supply more measured night NEE.")


def without_no_e0_advice(text: str) -> str:
    """`text` without the closing advice of :func:`_no_e0_message` (unchanged otherwise).

    Parameters
    ----------
    text : str
        An error message, e.g. ``str(InsufficientDataError)``.

    Returns
    -------
    str
        The message's facts (which year, how many night records and windows, why each
        window was rejected), ending in a full stop.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11, 1424–1439 (the window
    acceptance the facts report).
    """
    return text.removesuffix(NO_E0_ADVICE).rstrip()


# --------------------------------------------------------------------------- #
# Rref windows
# --------------------------------------------------------------------------- #
def fit_rref_windows(index, nee, temperature, is_night, e0, *, rref_window_days=4.0,
                     rref_min_points=6, rg=None, low_light_rg=0.0,
                     breaks=None) -> pd.DataFrame:
    """Fit the reference respiration Rref with E0 fixed, in consecutive windows.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time, increasing.
    nee : array_like
        Measured NEE [µmol m-2 s-1]; NaN where not measured or rejected.
    temperature : array_like
        Measured driving temperature [°C].
    is_night : array_like of bool
        True for night records.
    e0 : array_like
        E0 applied to each record [K] (its year's value from :func:`annual_e0`).
    rref_window_days : float, optional
        Window length [days]; 4 days, Reichstein et al. (2005).
    rref_min_points : int, optional
        Fewest usable night records in a window; 6, as for the E0 windows
        (our choice, see Notes).
    rg : array_like, optional
        Measured global radiation [W m-2], for the low-light fit below.
    low_light_rg : float, optional
        In a run of windows with fewer than `rref_min_points` night records that
        spans at least :data:`LOW_LIGHT_MIN_RUN_DAYS`, Rref is fitted instead to the
        measured NEE at ``Rg < low_light_rg`` [W m-2] (night records included) with
        a straight light response, ``NEE = Rref f - a Rg`` (see Notes). Default 0:
        off (night records only).
    breaks : array_like of int, optional
        Record positions where a declared event starts a new piece of the record
        (:func:`fluxpart.gapfill.event_breaks` of ``Config.events``): a window an
        event falls in is cut there, a part shorter than half a window joined to the
        neighbouring window on its own side (:func:`fluxpart.partition.pieces.cut_windows`),
        so every window's records lie on one side of every event and windows run
        from half to one and a half `rref_window_days`. Default None: no events.

    Returns
    -------
    pandas.DataFrame
        The retained windows, in time order, with columns ``window_start``,
        ``window_end`` (exclusive), ``window_centre``, ``points``, ``rref``
        [µmol m-2 s-1], ``rref_se`` [µmol m-2 s-1], ``e0`` [K] (mean E0 of the
        window's records; it differs from the year's value only in a window that
        spans a year boundary) and ``source`` (``night``, or ``low_light`` for a
        window fitted by the low-light rule).

    Raises
    ------
    InsufficientDataError
        If no window can be retained.

    Notes
    -----
    Windows are consecutive and non-overlapping, starting at local noon at or
    before the first record. With ``f = exp(E0 (1/(Tref - T0) - 1/(T - T0)))``
    (Lloyd & Taylor 1994, eq. 11) the model is linear in Rref, and its least
    squares estimate is ``Rref = Σ f·NEE / Σ f²``, with standard error
    ``sqrt(s² / Σ f²)``, ``s² = SSR / (n - 1)``. Windows with fewer than
    `rref_min_points` records, a negative Rref or a standard error above
    :data:`RREF_SE_LIMIT` (since round trial14: nights so cold that ``f`` is ~0, e.g.
    1e-7 at −28 °C with E0 = 419 K, gave Rref of ±1e5 whose interpolation carried them
    to warmer records) are dropped, and Rref is interpolated across them. Six records
    are at least two nights' worth of measured night NEE at most sites; with the random error of one record
    about as large as night respiration itself, Rref from two to five records
    is mostly noise, and such windows sit where night data thin out (edges of
    long gaps, the short nights of a high-latitude summer), where they anchor
    the interpolation across the gap: on generated 66° N site-years, windows of
    2–5 records beside the midsummer gap moved annual Reco by +13 % and −8 %.

    Low-light rule (our extension, used only in runs of windows without enough night
    data spanning at least :data:`LOW_LIGHT_MIN_RUN_DAYS`, e.g. weeks of midnight
    sun; across shorter runs Rref is interpolated as before): at low light canopy
    photosynthesis rises linearly with light (the light-limited part of the light
    response; common practice), so
    below `low_light_rg` measured NEE is ``Rref f - a Rg`` with the slope ``a`` the
    window's light-use efficiency, and the intercept at ``Rg = 0`` is respiration,
    as night records measure it (the extrapolation to zero light of Kok 1948 (m)).
    Both coefficients by least squares (a 2 x 2 system per window); the window is
    kept with at least `rref_min_points` records, a positive determinant, Rref
    >= 0 and ``a >= 0`` (more light, more uptake), with ``se(Rref) =
    sqrt(s² Σx² / det)``, ``s² = SSR / (n - 2)``. Where the canopy does not
    photosynthesise (midnight sun over snow or a thawing tundra before green-up) the
    true ``a`` is 0 and only the windows the noise tilted towards uptake are kept, whose
    intercepts read Rref high (the fourteenth trial's tundra: June Reco 16.9 g C m-2 for
    2.5); fitting such windows with ``a = 0`` was tried in round trial14 and not kept, as
    it read the generated polar fens' Reco low where their light response is real but
    unresolved (see the changelog). A light response that already
    bends below `low_light_rg` makes the line's intercept low by a part of the
    bend (a concave curve lies above its chord), so Reco there is a lower estimate.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.

    Kok, B. (1948). A critical consideration of the quantum yield of
    Chlorella-photosynthesis. Enzymologia 13:1–56 (m).
    """
    index = _check_index(index)
    length = len(index)
    nee = _as_float("nee", nee, length)
    temperature = _as_temperature("temperature", temperature, length)
    is_night = _as_night("is_night", is_night, length)
    e0 = _as_float("e0", e0, length)
    window_seconds = _check_positive("rref_window_days", rref_window_days) * _SECONDS_PER_DAY
    min_points = _check_count("rref_min_points", rref_min_points)

    usable = _usable(nee, temperature, is_night) & np.isfinite(e0)
    anchor = _window_anchor(index)
    seconds = _seconds_since(index, anchor)
    end = _record_end_seconds(seconds)
    n_windows = max(1, math.ceil(end / window_seconds))
    starts = np.arange(n_windows) * window_seconds
    edges = pieces.break_times(seconds, breaks)
    if len(edges):
        starts, ends = pieces.cut_windows(starts, window_seconds, edges)
        n_windows = starts.size
    else:
        ends = starts + window_seconds
    point_seconds = seconds[usable]
    lo = np.searchsorted(point_seconds, starts, side="left")
    hi = np.searchsorted(point_seconds, ends, side="left")
    shape_all = lloyd_taylor(temperature[usable], 1.0, e0[usable])
    counts, mask, (shape, flux, e0_pad) = _gather(lo, hi, shape_all, nee[usable], e0[usable])

    with np.errstate(invalid="ignore", divide="ignore"):
        sum_ff = np.sum(shape * shape, axis=1)
        rref = np.sum(shape * flux, axis=1) / sum_ff
        residual = np.where(mask, flux - rref[:, None] * shape, 0.0)
        variance = np.where(counts > 1, np.sum(residual * residual, axis=1)
                            / np.maximum(counts - 1, 1), np.nan)
        rref_se = np.sqrt(variance / sum_ff)
        mean_e0 = np.sum(e0_pad, axis=1) / counts
    # a window whose Rref is not resolved within the flux range a record can hold (nights
    # so cold that the Lloyd–Taylor term is ~0: noise divided by it) says nothing about
    # Rref; interpolated through, its value times a warmer record's term is a respiration
    # no ecosystem has
    resolved = ~(rref_se > RREF_SE_LIMIT)
    keep = (counts >= min_points) & np.isfinite(rref) & (rref >= 0) & resolved
    source = np.full(n_windows, "night", dtype=object)
    long_runs = _long_runs(~keep, window_seconds, (ends - starts) if len(edges) else None)
    if rg is not None and low_light_rg > 0 and long_runs.any():
        rg = _as_float("rg", rg, length)
        low = _low_light_rref(seconds, starts, ends, nee, temperature, is_night, e0,
                              rg, low_light_rg, min_points)
        take = long_runs & np.isfinite(low["rref"])
        rref, rref_se = np.where(take, low["rref"], rref), np.where(take, low["rref_se"], rref_se)
        counts, mean_e0 = np.where(take, low["points"], counts), np.where(take, low["e0"],
                                                                          mean_e0)
        source[take] = "low_light"
        keep |= take
    if not keep.any():
        raise InsufficientDataError(
            f"Rref fit: none of the {n_windows} windows of {rref_window_days:g} days has "
            f"{min_points} or more usable night records and a non-negative Rref "
            f"({int(usable.sum())} usable night records in all). Lower rref_min_points or "
            "supply more measured night NEE.")
    if len(edges):
        return _bounded_frame(anchor, starts[keep], ends[keep],
                              points=counts[keep].astype("int64"), rref=rref[keep],
                              rref_se=rref_se[keep], e0=mean_e0[keep],
                              source=source[keep].astype(str))
    return _window_frame(anchor, starts[keep], window_seconds,
                         points=counts[keep].astype("int64"), rref=rref[keep],
                         rref_se=rref_se[keep], e0=mean_e0[keep],
                         source=source[keep].astype(str))


def _long_runs(failed, window_seconds, lengths=None) -> np.ndarray:
    """Windows in runs of consecutive failed windows spanning at least
    `LOW_LIGHT_MIN_RUN_DAYS` (shorter runs keep the interpolation across them);
    `lengths`: each window's own length [s] where events cut them."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], failed.astype(np.int8), [0]])))
    out = np.zeros(len(failed), dtype=bool)
    for first, stop in zip(edges[::2], edges[1::2], strict=True):
        span = ((stop - first) * window_seconds if lengths is None
                else float(np.sum(lengths[first:stop])))
        if span >= LOW_LIGHT_MIN_RUN_DAYS * _SECONDS_PER_DAY:
            out[first:stop] = True
    return out


def _low_light_rref(seconds, starts, ends, nee, temperature, is_night, e0, rg,
                    low_light_rg, min_points) -> dict:
    """Rref per window from NEE = Rref f - a Rg at low light (see fit_rref_windows)."""
    light = np.where(is_night, 0.0, rg)
    usable = (np.isfinite(nee) & np.isfinite(temperature) & np.isfinite(e0)
              & np.isfinite(light) & (light >= 0.0) & (light < low_light_rg))
    point_seconds = seconds[usable]
    lo = np.searchsorted(point_seconds, starts, side="left")
    hi = np.searchsorted(point_seconds, ends, side="left")
    shape_all = lloyd_taylor(temperature[usable], 1.0, e0[usable])
    counts, mask, (f, x, y, e0_pad) = _gather(lo, hi, shape_all, light[usable], nee[usable],
                                              e0[usable])
    with np.errstate(invalid="ignore", divide="ignore"):
        sff, sfx, sxx = (f * f).sum(1), (f * x).sum(1), (x * x).sum(1)
        sfy, sxy = (f * y).sum(1), (x * y).sum(1)
        det = sff * sxx - sfx * sfx
        rref = (sfy * sxx - sxy * sfx) / det
        slope = (sff * sxy - sfx * sfy) / det          # of Rg: minus the light-use slope a
        residual = np.where(mask, y - rref[:, None] * f - slope[:, None] * x, 0.0)
        variance = (residual * residual).sum(1) / (counts - 2)
        rref_se = np.sqrt(variance * sxx / det)
        mean_e0 = e0_pad.sum(1) / counts
    good = ((counts >= max(min_points, 3)) & (det > 0) & np.isfinite(rref) & (rref >= 0)
            & (slope <= 0) & np.isfinite(rref_se))
    return {"rref": np.where(good, rref, np.nan), "rref_se": np.where(good, rref_se, np.nan),
            "points": counts, "e0": mean_e0}


def rref_per_record(index, rref_windows: pd.DataFrame, breaks=None) -> np.ndarray:
    """Interpolate Rref linearly in time between window centres to every record.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval.
    rref_windows : pandas.DataFrame
        Output of :func:`fit_rref_windows` (columns ``window_centre``, ``rref``).
    breaks : array_like of int, optional
        Record positions where a declared event starts a new piece of the record
        (:func:`fluxpart.gapfill.event_breaks`): each record takes Rref only from the
        windows centred in its own piece, constant beyond the piece's first and last
        centre; a piece without a window takes the interpolation over the windows
        beside it, across the events (:func:`fluxpart.partition.pieces.piece_interp`;
        named by :func:`fluxpart.partition.pieces.window_notes`). Default None.

    Returns
    -------
    numpy.ndarray
        Rref per record [µmol m-2 s-1]; constant beyond the first and last centre.

    Notes
    -----
    Records are placed at their interval start, as the index stamps them. Across
    a long gap without any retained window the interpolation is a straight line
    between the windows on either side; the gap is visible in `rref_windows`.
    """
    index = _check_index(index)
    if rref_windows.empty:
        raise InsufficientDataError("Rref interpolation: no Rref window to interpolate from")
    anchor = index[0]
    centres = _seconds_since(pd.DatetimeIndex(rref_windows["window_centre"]), anchor)
    seconds = _seconds_since(index, anchor)
    edges = pieces.break_times(seconds, breaks)
    if len(edges):
        return pieces.piece_interp(seconds, centres, rref_windows["rref"].to_numpy(dtype=float),
                                   edges)[0]
    return np.interp(seconds, centres, rref_windows["rref"].to_numpy(dtype=float))


# --------------------------------------------------------------------------- #
# Whole method
# --------------------------------------------------------------------------- #
def partition_nighttime(index, nee_measured, nee_filled, temperature_measured,
                        temperature_filled, is_night, *, e0_window_days=15.0,
                        e0_window_step_days=5.0, e0_min_points=6,
                        e0_min_temperature_range=5.0, e0_bounds=(30.0, 450.0),
                        e0_max_relative_error=0.5, e0_best_windows=3, e0_fallback=None,
                        rref_window_days=4.0, rref_min_points=6,
                        respiration_driver="tair", e0_method="joint", rg=None,
                        rref_low_light_rg=0.0, e0_nearest_year=False,
                        breaks=None, sun_up=None) -> NighttimeResult:
    """Partition NEE into Reco and GPP by the nighttime method of Reichstein et al. (2005).

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time, 30- or 60-minute spacing,
        one or several years.
    nee_measured : array_like
        Measured NEE after screening and u* filtering [µmol m-2 s-1]; NaN where
        not measured or rejected. Only these values enter the fits.
    nee_filled : array_like
        Gap-filled NEE [µmol m-2 s-1]; GPP is computed against it.
    temperature_measured : array_like
        Measured driving temperature [°C] (NaN where missing), used in the fits.
    temperature_filled : array_like
        Gap-filled driving temperature [°C], used to compute Reco for every record.
    is_night : array_like of bool
        True for night records.
    e0_window_days, e0_window_step_days, e0_min_points, e0_min_temperature_range, \
e0_bounds, e0_max_relative_error
        See :func:`fit_e0_windows`.
    e0_best_windows, e0_fallback
        See :func:`annual_e0`.
    rref_window_days, rref_min_points
        See :func:`fit_rref_windows`.
    respiration_driver : str, optional
        Which temperature the two temperature arrays are (``"tair"`` or
        ``"tsoil"``); recorded in the result, the arrays themselves are used.
    e0_method : str, optional
        ``"joint"`` (default): each year's E0 from :func:`fit_e0_joint`, falling
        back to the windows where that fit is not accepted; ``"best_windows"``:
        the mean of the best short windows only (Reichstein et al. 2005).
    rg : array_like, optional
        Measured global radiation [W m-2] for the low-light Rref rule.
    rref_low_light_rg : float, optional
        Rg below which a window without enough night records fits Rref to its
        low-light NEE [W m-2]; 0 (default here) switches the rule off. See
        :func:`fit_rref_windows`.
    e0_nearest_year : bool, optional
        A year without an E0 of its own takes the nearest year's (``nearest_year``
        of :func:`annual_e0`); default False.
    breaks : array_like of int, optional
        Record positions where a declared event (harvest, cut, fire, thinning;
        ``Config.events`` through :func:`fluxpart.gapfill.event_breaks`) starts a new
        piece of the record: no E0 or Rref window takes records from both sides of
        an event, and a record's Rref comes from the windows of its own piece only
        (:func:`fit_e0_windows`, :func:`fit_e0_joint`, :func:`fit_rref_windows`,
        :func:`rref_per_record`). E0 stays one per calendar year. Default None.
    sun_up : array_like of bool, optional
        The sun above the horizon for part of each record (potential radiation above
        0). Given, the E0 and Rref fits use night records with the sun down, in each
        Rref window that has `rref_min_points` usable ones, and every night record
        elsewhere (:func:`fluxpart.partition.dark_nights.fit_mask`): twilight records
        under Rg < 10 W m-2 can hold uptake. Default None: every night record.

    Returns
    -------
    NighttimeResult
        Reco, GPP, Rref and E0 per record and the window tables.

    Raises
    ------
    InsufficientDataError
        If there are no usable night records, a year has no acceptable E0
        window (and no `e0_fallback`), or no Rref window can be fitted.
    ConfigError
        For an invalid setting.
    FluxpartError
        For arrays not aligned with the index.
    ImplausibleValueError
        For temperatures that cannot be °C.

    Notes
    -----
    1. E0 per calendar year, fitted jointly with a free Rref in every Rref
       window (:func:`fit_e0_joint`); where that fit is not accepted, from short
       windows of measured night NEE (:func:`fit_e0_windows`, :func:`annual_e0`).
       Each record takes the E0 of the calendar year its interval starts in.
    2. Rref with E0 fixed in consecutive 4-day windows (:func:`fit_rref_windows`),
       interpolated to every record (:func:`rref_per_record`).
    3. ``Reco = Rref exp(E0 (1/(Tref - T0) - 1/(T - T0)))`` on the gap-filled
       temperature (Lloyd & Taylor 1994, eq. 11) and ``GPP = Reco - NEE_filled``
       (NEE positive = release). GPP is not clipped at zero: night-time values
       scatter around zero by noise, and clipping would bias the sums upward.

    References
    ----------
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration: review and improved algorithm. Global
    Change Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x

    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    if respiration_driver not in _RESPIRATION_DRIVERS:
        raise ConfigError(f"respiration_driver = {respiration_driver!r}: expected one of "
                          f"{', '.join(repr(d) for d in _RESPIRATION_DRIVERS)}")
    if e0_method not in _E0_METHODS:
        raise ConfigError(f"e0_method = {e0_method!r}: expected one of "
                          f"{', '.join(repr(m) for m in _E0_METHODS)}")
    index = _check_index(index)
    length = len(index)
    nee_measured = _as_float("nee_measured", nee_measured, length)
    nee_filled = _as_float("nee_filled", nee_filled, length)
    temperature_measured = _as_temperature("temperature_measured", temperature_measured,
                                           length)
    temperature_filled = _as_temperature("temperature_filled", temperature_filled, length)
    is_night = _as_night("is_night", is_night, length)
    if sun_up is not None:
        is_night = dark_nights.fit_mask(
            _seconds_since(index, _window_anchor(index)),
            _usable(nee_measured, temperature_measured, is_night), is_night,
            _as_night("sun_up", sun_up, length), window_days=rref_window_days,
            min_points=rref_min_points)
    # without events the window functions are called exactly as before
    cut = {} if breaks is None or not len(breaks) else {"breaks": breaks}

    windows = fit_e0_windows(
        index, nee_measured, temperature_measured, is_night, e0_window_days=e0_window_days,
        e0_window_step_days=e0_window_step_days, e0_min_points=e0_min_points,
        e0_min_temperature_range=e0_min_temperature_range, e0_bounds=e0_bounds,
        e0_max_relative_error=e0_max_relative_error, **cut)
    years = index.year.to_numpy()
    usable = _usable(nee_measured, temperature_measured, is_night)
    record_years = np.unique(years)
    night_records = pd.Series([int(np.sum(usable & (years == y))) for y in record_years],
                              index=record_years.astype("int64"))
    joint = None
    if e0_method == "joint":
        joint = fit_e0_joint(index, nee_measured, temperature_measured, is_night,
                             e0_window_days=e0_window_days, e0_min_points=e0_min_points,
                             e0_bounds=e0_bounds, e0_max_relative_error=e0_max_relative_error,
                             **cut)
    e0_annual = annual_e0(windows, e0_best_windows=e0_best_windows, e0_fallback=e0_fallback,
                          night_records=night_records, joint=joint,
                          nearest_year=e0_nearest_year)
    e0 = e0_annual["e0"].reindex(years).to_numpy(dtype=float)
    rref_windows = fit_rref_windows(index, nee_measured, temperature_measured, is_night, e0,
                                    rref_window_days=rref_window_days,
                                    rref_min_points=rref_min_points, rg=rg,
                                    low_light_rg=rref_low_light_rg, **cut)
    rref = rref_per_record(index, rref_windows, **cut)
    return _respiration(rref, e0, nee_filled, temperature_filled, windows, e0_annual,
                        rref_windows, respiration_driver)


def _respiration(rref, e0, nee_filled, temperature_filled, e0_windows, e0_annual,
                 rref_windows, respiration_driver) -> NighttimeResult:
    """Step 3 of :func:`partition_nighttime`: Reco and GPP of fitted Rref and E0."""
    reco = lloyd_taylor(temperature_filled, rref, e0)
    # At or below T0 (-46.02 °C, air over a Siberian or Antarctic winter) the equation's
    # respiration has reached its limit, 0: T0 is the temperature at which respiration
    # vanishes (Lloyd & Taylor 1994). Left NaN, a few such records made the year's Reco
    # and GPP NaN without a word (review, round ten).
    kelvin = np.asarray(temperature_filled, dtype=float) + KELVIN_OFFSET
    reco = np.where((kelvin <= LLOYD_TAYLOR_T0_KELVIN) & np.isfinite(rref) & np.isfinite(e0),
                    0.0, reco)
    gpp = reco - nee_filled
    return NighttimeResult(reco=reco, gpp=gpp, rref=rref, e0=e0, e0_windows=e0_windows,
                           e0_annual=e0_annual, rref_windows=rref_windows,
                           respiration_driver=respiration_driver)


def apply_fit(fit: NighttimeResult, nee_filled, temperature_filled) -> NighttimeResult:
    """Reco and GPP of an earlier nighttime fit on other gap-filled NEE and temperature.

    The fits of :func:`partition_nighttime` (E0, Rref windows) depend only on the
    measured NEE and temperature and the night mask; the gap-filled series enter
    only its last step. A caller that fitted the same measured series before (the
    temperature choice fits each candidate on them) reuses that fit here, with
    the result :func:`partition_nighttime` would give.

    Parameters
    ----------
    fit : NighttimeResult
        Result of :func:`partition_nighttime` on the same measured NEE,
        measured temperature, night mask and settings.
    nee_filled : array_like
        Gap-filled NEE [µmol m-2 s-1].
    temperature_filled : array_like
        Gap-filled driving temperature [°C].

    Returns
    -------
    NighttimeResult
        `fit` with Reco and GPP computed from `nee_filled` and `temperature_filled`.

    Raises
    ------
    LengthMismatchError
        For arrays of another length than the fit's.
    ImplausibleValueError
        For temperatures that cannot be °C.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.

    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    length = len(fit.rref)
    nee_filled = _as_float("nee_filled", nee_filled, length)
    temperature_filled = _as_temperature("temperature_filled", temperature_filled, length)
    return _respiration(fit.rref, fit.e0, nee_filled, temperature_filled, fit.e0_windows,
                        fit.e0_annual, fit.rref_windows, fit.respiration_driver)
