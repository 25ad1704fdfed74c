"""Daytime partitioning: light-response curve with VPD limitation (Lasslop et al. 2010).

Measured daytime NEE is fitted, window by window, to

    NEE = -alpha beta Rg / (alpha Rg + beta) + Rref LT(T; E0),
    beta = beta0 exp(-k (VPD - VPD0)) for VPD > VPD0, beta = beta0 otherwise,

with E0 taken from the nighttime method (one value per record, supplied by the
caller) and alpha, beta0, k and Rref fitted. All windows of a record are fitted
at once by a batched, bounded Levenberg–Marquardt iteration with analytic
Jacobians over padded arrays (no Python loop over windows). Parameters of the
accepted windows are interpolated linearly in time between window centres, and
GPP and Reco are evaluated on the supplied (gap-filled) drivers.

Rules and their sources (``(m)`` = recalled from memory, check against the paper):

- 4-day windows moved by 2 days: Lasslop et al. (2010) (m).
- E0 fixed at the nighttime estimate: Lasslop et al. (2010) (m).
- VPD0 = 10 hPa: Lasslop et al. (2010), eq. 4 (m).
- Starting values alpha = 0.01 µmol J-1, k = 0, beta0 = |q03 - q97| of the
  window's daytime NEE: Lasslop et al. (2010) (m). Rref starts from the window's
  night data: the least-squares Rref of measured night NEE with E0 fixed (our
  choice; Lasslop et al. used night-time respiration to inform the daytime
  Rref (m)). By default the night data are only this starting value, not a
  prior term in the cost, and the daytime fit alone sets Rref. With
  ``night_in_fit=True`` (our option) the window's measured night NEE joins the
  fit as ``Rref LT(T)``, a likelihood term that constrains Rref where the
  daytime signal is weak.
- alpha bounded to [0, 0.22] µmol J-1; a window whose alpha reaches 0.22 is
  rejected: Lasslop et al. (2010) reject alpha > 0.22 (m). alpha = 0 (no
  assimilation, e.g. dormant season) is accepted and gives zero GPP (our choice).
- beta0 bounded to [0, 250] µmol m-2 s-1: Lasslop et al. (2010) name 250 as the
  largest plausible beta0 (m). A window whose beta0 reaches 250 (crops, C4
  canopies whose light response barely saturates) is accepted with beta0 at the
  bound and flagged "beta0 at upper bound": within the observed light range the
  curve is then nearly linear and alpha absorbs the difference (our choice, so
  that such windows are fitted rather than lost).
- k >= 0. k is fixed at 0 when fewer than `k_min_points` records of the window
  have VPD above VPD0 (not identifiable; our choice of count), and when the fit
  drives k to its bound 0: Lasslop et al. (2010) set k = 0 and refit when the
  fit gives k < 0 (m); the bounded optimum with k at 0 is that refit.
- Rref >= 0; a window whose Rref reaches 0 is rejected: Lasslop et al. (2010)
  reject negative respiration (m).
- A window with fewer than `min_points` usable daytime records, a fit that does
  not converge, or a singular fit (a free parameter without finite standard
  error) is rejected (our choices).
- Rejected windows are skipped in the interpolation; beyond the first and last
  accepted centres the parameters are held constant (linear interpolation
  between centres and constant extension: our reading of the paper's use of
  neighbouring windows (m)).

Standard errors are ``sqrt(diag((J^T J)^-1 s^2))`` over the parameters left
free at the solution, with ``s^2`` the residual variance; parameters fixed or at
a bound get NaN.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .._validate import as_float
from ..constants import LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN
from ..errors import (
    ConfigError,
    DuplicateTimestampError,
    ImplausibleValueError,
    InsufficientDataError,
    LengthMismatchError,
    NonMonotonicTimestampError,
    TimestampError,
)
from ..responses import (
    LASSLOP_VPD0_HPA,
    light_response,
    light_response_derivatives,
    lloyd_taylor,
)

__all__ = ["DaytimeResult", "PARAMETER_COLUMNS", "partition_daytime"]

#: Columns of :attr:`DaytimeResult.parameters`, one row per window.
PARAMETER_COLUMNS = (
    "window_start", "window_end", "window_centre", "points", "night_points",
    "alpha", "beta0", "k", "rref", "e0",
    "alpha_se", "beta0_se", "k_se", "rref_se",
    "rmse", "accepted", "reason", "k_fixed",
)

_ALPHA, _BETA0, _K, _RREF = range(4)
_MODEL_INPUTS = ("nee", "rg", "vpd", "factor")
_ALPHA_START = 0.01          # µmol J-1, Lasslop et al. (2010) (m)
_RREF_FLOOR_START = 0.1      # µmol m-2 s-1, keeps the start off the bound (our choice)
_LAMBDA_START = 1e-3         # Marquardt damping, usual starting value (common practice)
_LAMBDA_MAX = 1e10
_FTOL = 1e-10                # relative cost change at convergence
_XTOL = 1e-8                 # relative step at convergence
_SE_TOL = 1e-2               # remaining step in standard errors at convergence
_MAX_CONDITION = 1e12        # largest condition number of the scaled J^T J (our choice)


@dataclass(frozen=True)
class DaytimeResult:
    """Result of :func:`partition_daytime`.

    Attributes
    ----------
    gpp : numpy.ndarray
        Gross primary production per record, positive = uptake [µmol m-2 s-1];
        zero where Rg <= 0, NaN where a driver is NaN.
    reco : numpy.ndarray
        Ecosystem respiration per record, Lloyd–Taylor with the interpolated
        Rref and the supplied E0 [µmol m-2 s-1].
    parameters : pandas.DataFrame
        One row per window, columns :data:`PARAMETER_COLUMNS`:
        ``window_start``, ``window_end`` (exclusive), ``window_centre``
        (timestamps); ``points`` (usable daytime records); ``night_points``
        (measured night records, used for the Rref start); ``alpha`` [µmol J-1],
        ``beta0`` [µmol m-2 s-1], ``k`` [hPa-1], ``rref`` [µmol m-2 s-1],
        ``e0`` (mean of the window's E0) [K]; their standard errors
        ``alpha_se``, ``beta0_se``, ``k_se``, ``rref_se`` (NaN where fixed or at
        a bound); ``rmse`` of the fit [µmol m-2 s-1]; ``accepted`` (bool);
        ``reason`` ("ok", a note on an accepted fit, or why it was rejected);
        ``k_fixed`` (bool). Parameters of windows too small to fit are NaN.
    """

    gpp: np.ndarray
    reco: np.ndarray
    parameters: pd.DataFrame


def partition_daytime(index, nee_measured, rg, vpd, temperature, is_night, e0, *,
                      window_days=4.0, window_step_days=2.0, min_points=10,
                      k_min_points=5, vpd0=LASSLOP_VPD0_HPA, alpha_bounds=(0.0, 0.22),
                      beta0_max=250.0, night_in_fit=False, max_iterations=200,
                      tref_kelvin=LLOYD_TAYLOR_TREF_KELVIN,
                      t0_kelvin=LLOYD_TAYLOR_T0_KELVIN) -> DaytimeResult:
    """Partition NEE into GPP and Reco by the daytime light-response method.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record start times, increasing, regular 30- or 60-minute spacing; any
        number of years.
    nee_measured : array_like
        Measured NEE, NaN where not measured or rejected [µmol m-2 s-1,
        positive = release].
    rg : array_like
        Global radiation, gap-filled [W m-2].
    vpd : array_like
        Vapour pressure deficit, gap-filled [hPa].
    temperature : array_like
        Respiration driving temperature (air or soil), gap-filled [°C].
    is_night : array_like of bool
        True for night records; only records with ``is_night`` False and
        ``rg > 0`` enter the light-response fit.
    e0 : array_like
        Lloyd–Taylor temperature sensitivity per record, from the nighttime
        method [K].
    window_days : float, optional
        Window length [days]; default 4, Lasslop et al. (2010) (m).
    window_step_days : float, optional
        Step between window starts [days]; default 2, Lasslop et al. (2010) (m).
    min_points : int, optional
        Fewest usable daytime records for a window fit; default 10 (our choice:
        well above the 4 parameters, and reached by a single clear day of
        hourly data).
    k_min_points : int, optional
        Fewest records with VPD above `vpd0` for k to be fitted; otherwise k is
        fixed at 0. Default 5 (our choice).
    vpd0 : float, optional
        VPD threshold of the limitation [hPa]; default 10, Lasslop et al. (2010) (m).
    alpha_bounds : tuple of float, optional
        Bounds of alpha [µmol J-1]; default (0, 0.22), Lasslop et al. (2010) (m).
        A window reaching the upper bound is rejected.
    beta0_max : float, optional
        Upper bound of beta0 [µmol m-2 s-1]; default 250, Lasslop et al.
        (2010) (m). A window reaching it is accepted and flagged.
    night_in_fit : bool, optional
        Also fit the window's measured night NEE (model ``Rref LT(T)``, no
        light), so that night data constrain Rref as a likelihood term beside
        the daytime data. Default False: the published method fits daytime
        data only (Lasslop et al. 2010 (m)); True is our option for records
        whose daytime signal is weak (dormant seasons, hourly data).
    max_iterations : int, optional
        Levenberg–Marquardt iterations before a window counts as not converged;
        default 200 (our choice).
    tref_kelvin, t0_kelvin : float, optional
        Lloyd–Taylor reference temperature and T0 [K]; defaults 283.15 K and
        227.13 K, Lloyd & Taylor (1994).

    Returns
    -------
    DaytimeResult
        Per-record ``gpp`` and ``reco`` and the per-window ``parameters``.

    Raises
    ------
    TimestampError, NonMonotonicTimestampError, DuplicateTimestampError
        If `index` is not an increasing DatetimeIndex of unique stamps.
    FluxpartError
        If an array is not one-dimensional with one value per record.
    ImplausibleValueError
        If `is_night` is not boolean or `e0` is not finite and positive.
    ConfigError
        If a setting is out of range.
    InsufficientDataError
        If no window has an acceptable fit.

    Notes
    -----
    Model: Lasslop et al. (2010), eqs. 3–4 (m), with Reco by Lloyd & Taylor
    (1994), eq. 11. The rules for bounds, starting values, fixing k and
    rejecting windows are listed, each with its source, in the module docstring.
    Rref is defined at `tref_kelvin` (10 °C by default), so it is directly
    comparable with the nighttime method's Rref.

    References
    ----------
    Lasslop, G., Reichstein, M., Papale, D., Richardson, A. D., Arneth, A.,
    Barr, A., Stoy, P. & Wohlfahrt, G. (2010). Separation of net ecosystem
    exchange into assimilation and respiration using a light response curve
    approach: critical issues and global evaluation. Global Change Biology
    16:187–208. doi:10.1111/j.1365-2486.2009.02041.x

    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8:315–323. doi:10.2307/2389824

    Marquardt, D. W. (1963). An algorithm for least-squares estimation of
    nonlinear parameters. Journal of the Society for Industrial and Applied
    Mathematics 11:431–441. doi:10.1137/0111030
    """
    _check_settings(window_days, window_step_days, min_points, k_min_points, vpd0,
                    alpha_bounds, beta0_max, max_iterations)
    if not isinstance(night_in_fit, (bool, np.bool_)):
        raise ConfigError(f"daytime night_in_fit = {night_in_fit!r}: expected true or false")
    days = _days_since_start(index)
    n = len(days)
    nee = as_float(nee_measured, "nee_measured", n)
    rg = as_float(rg, "rg", n)
    vpd = as_float(vpd, "vpd", n)
    temperature = as_float(temperature, "temperature", n)
    night = _as_bool_array(is_night, "is_night", n)
    e0 = as_float(e0, "e0", n)
    bad_e0 = ~(np.isfinite(e0) & (e0 > 0))
    if bad_e0.any():
        row = int(np.flatnonzero(bad_e0)[0])
        raise ImplausibleValueError(
            f"e0: expected a finite, positive temperature sensitivity [K] for every record; "
            f"found {e0[row]!r} at row {row} ({index[row]}). Map the nighttime method's E0 "
            "to every record before daytime partitioning.")

    respiration_factor = lloyd_taylor(temperature, 1.0, e0, tref_kelvin=tref_kelvin,
                                      t0_kelvin=t0_kelvin)
    measured = np.isfinite(nee) & np.isfinite(respiration_factor)
    usable_day = measured & ~night & np.isfinite(vpd) & np.isfinite(rg) & (rg > 0)
    usable_night = measured & night

    starts, ends = _window_bounds(days, window_days, window_step_days)
    windows = _gather_windows(days, starts, ends, usable_day, usable_night, nee, rg, vpd,
                              respiration_factor, e0, vpd0, night_in_fit)
    lower = np.array([alpha_bounds[0], 0.0, 0.0, 0.0])
    upper = np.array([alpha_bounds[1], beta0_max, np.inf, np.inf])
    theta0 = _starting_values(windows, lower, upper)
    k_free = windows["high_vpd_points"] >= k_min_points
    fitted = windows["points"] >= min_points
    fixed = np.zeros(theta0.shape, dtype=bool)
    fixed[:, _K] = ~k_free
    fixed[~fitted] = True
    theta0[~k_free, _K] = 0.0
    mask = windows["mask"] & fitted[:, None]
    theta, converged = _levenberg_marquardt(theta0, fixed, lower, upper, windows, mask,
                                            vpd0, max_iterations)
    standard_errors, rmse = _standard_errors(theta, fixed, lower, upper, windows, mask, vpd0)

    k_fixed = fixed[:, _K] | (theta[:, _K] == 0.0)
    accepted, reason = _judge(theta, standard_errors, fixed, fitted, converged, lower, upper)
    theta[~fitted] = np.nan
    if not accepted.any():
        counts = pd.Series(reason).value_counts()
        summary = ", ".join(f"{count} {why}" for why, count in counts.items())
        raise InsufficientDataError(
            f"daytime partitioning: none of the {len(reason)} windows of {window_days} days "
            f"has an acceptable light-response fit ({summary}); the record needs measured "
            f"daytime NEE (at least {min_points} records in some window).")

    centres = (starts + ends) / 2.0
    per_record = _interpolate_parameters(days, centres, theta, accepted)
    gpp = light_response(rg, vpd, per_record[:, _ALPHA], per_record[:, _BETA0],
                         per_record[:, _K], vpd0=vpd0)
    reco = lloyd_taylor(temperature, per_record[:, _RREF], e0, tref_kelvin=tref_kelvin,
                        t0_kelvin=t0_kelvin)
    parameters = _parameter_table(index, starts, ends, windows, theta, standard_errors, rmse,
                                  accepted, reason, k_fixed)
    return DaytimeResult(gpp=gpp, reco=reco, parameters=parameters)


def _check_settings(window_days, window_step_days, min_points, k_min_points, vpd0,
                    alpha_bounds, beta0_max, max_iterations):
    for name, value in (("window_days", window_days), ("window_step_days", window_step_days),
                        ("beta0_max", beta0_max)):
        if not _is_number(value) or not value > 0:
            raise ConfigError(f"daytime {name} = {value!r}: expected a positive number")
    if window_step_days > window_days:
        raise ConfigError(f"daytime window_step_days = {window_step_days!r} exceeds "
                          f"window_days = {window_days!r}: records between windows would "
                          "never be fitted; use a step no longer than the window")
    if not _is_number(vpd0) or vpd0 < 0:
        raise ConfigError(f"daytime vpd0 = {vpd0!r}: expected a number of hPa >= 0")
    for name, value, smallest in (("min_points", min_points, 5),
                                  ("k_min_points", k_min_points, 1),
                                  ("max_iterations", max_iterations, 1)):
        if not isinstance(value, (int, np.integer)) or isinstance(value, bool) \
                or value < smallest:
            raise ConfigError(f"daytime {name} = {value!r}: expected a whole number "
                              f">= {smallest}")
    if (not isinstance(alpha_bounds, (tuple, list)) or len(alpha_bounds) != 2
            or not all(_is_number(v) for v in alpha_bounds)
            or not 0 <= alpha_bounds[0] < alpha_bounds[1]):
        raise ConfigError(f"daytime alpha_bounds = {alpha_bounds!r}: expected [low, high] "
                          "in µmol J-1 with 0 <= low < high")


def _is_number(value) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
        value, bool) and np.isfinite(value)


def _days_since_start(index) -> np.ndarray:
    if not isinstance(index, pd.DatetimeIndex):
        raise TimestampError(f"index: expected a pandas DatetimeIndex, found "
                             f"{type(index).__name__}")
    if len(index) == 0:
        raise InsufficientDataError("daytime partitioning: the record is empty")
    if index.hasnans:
        row = int(np.flatnonzero(index.isna())[0])
        raise TimestampError(f"index: missing timestamp at row {row}")
    seconds = np.asarray((index - index[0]) / pd.Timedelta(seconds=1), dtype=float)
    steps = np.diff(seconds)
    if (steps < 0).any():
        row = int(np.flatnonzero(steps < 0)[0]) + 1
        raise NonMonotonicTimestampError(f"index: timestamp at row {row} ({index[row]}) "
                                         "is earlier than the one before; sort the records")
    if (steps == 0).any():
        row = int(np.flatnonzero(steps == 0)[0]) + 1
        raise DuplicateTimestampError(f"index: timestamp {index[row]} occurs twice "
                                      f"(rows {row - 1} and {row})")
    return np.asarray((index - index[0].normalize()) / pd.Timedelta(days=1), dtype=float)


def _as_bool_array(values, name, n) -> np.ndarray:
    if isinstance(values, pd.Series) and values.dtype == "boolean" and not values.hasnans:
        values = values.to_numpy(dtype=bool)
    array = np.asarray(values)
    if array.dtype != bool:
        raise ImplausibleValueError(f"{name}: expected booleans without missing values, "
                                    f"found dtype {array.dtype}")
    if array.shape != (n,):
        raise LengthMismatchError(f"{name}: expected one value per record ({n}), found shape "
                                  f"{array.shape}")
    return array


def _window_bounds(days, window_days, window_step_days):
    """Window starts and (exclusive) ends [days], covering the record to its end."""
    spacing = np.median(np.diff(days)) if len(days) > 1 else 1.0 / 48.0
    record_end = days[-1] + spacing
    count = max(1, int(np.ceil((record_end - window_days) / window_step_days - 1e-9)) + 1)
    starts = np.arange(count) * float(window_step_days)
    return starts, starts + float(window_days)


def _gather_windows(days, starts, ends, usable_day, usable_night, nee, rg, vpd,
                    respiration_factor, e0, vpd0, night_in_fit) -> dict:
    """Padded (windows x records) arrays of each window's usable records."""
    first = np.searchsorted(days, starts, side="left")
    last = np.searchsorted(days, ends, side="left")
    width = max(1, int((last - first).max()))
    positions = first[:, None] + np.arange(width)[None, :]
    inside = positions < last[:, None]
    positions = np.minimum(positions, len(days) - 1)
    day = inside & usable_day[positions]
    night = inside & usable_night[positions]
    fit = day | night if night_in_fit else day

    def take(values, where):
        return np.where(where, values[positions], 0.0)

    e0_sum = take(e0, inside).sum(axis=1)
    e0_count = inside.sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        mean_e0 = np.where(e0_count > 0, e0_sum / e0_count, np.nan)
    return {
        "mask": fit,
        "nee": take(nee, fit),
        "rg": take(rg, day),             # night records in the fit see no light
        "vpd": take(vpd, day),
        "factor": take(respiration_factor, fit),
        "night_nee": take(nee, night),
        "night_factor": take(respiration_factor, night),
        "points": day.sum(axis=1),
        "night_points": night.sum(axis=1),
        "high_vpd_points": (day & (take(vpd, day) > vpd0)).sum(axis=1),
        "e0": mean_e0,
    }


def _starting_values(windows, lower, upper) -> np.ndarray:
    """Starting alpha, beta0, k (Lasslop et al. 2010 (m)) and Rref from night data.

    Rref: least squares of the window's night NEE on LT(T; E0); where a window
    has no usable night data, the median of the other windows' values, else
    1 µmol m-2 s-1 (our choices).
    """
    mask = windows["mask"] & (windows["rg"] > 0)
    count = len(mask)
    theta = np.empty((count, 4))
    theta[:, _ALPHA] = np.clip(_ALPHA_START, lower[_ALPHA], upper[_ALPHA])
    day_nee = np.where(mask, windows["nee"], np.nan)
    spread = np.zeros(count)
    has_day = mask.any(axis=1)
    if has_day.any():
        quantiles = np.nanquantile(day_nee[has_day], [0.03, 0.97], axis=1)
        spread[has_day] = np.abs(quantiles[1] - quantiles[0])
    theta[:, _BETA0] = np.clip(spread, 1.0, 0.9 * upper[_BETA0])
    theta[:, _K] = 0.0
    numerator = (windows["night_nee"] * windows["night_factor"]).sum(axis=1)
    denominator = (windows["night_factor"] ** 2).sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        night_rref = np.where(denominator > 0, numerator / denominator, np.nan)
    usable = np.isfinite(night_rref) & (night_rref > 0)
    fallback = float(np.median(night_rref[usable])) if usable.any() else 1.0
    theta[:, _RREF] = np.maximum(np.where(usable, night_rref, fallback), _RREF_FLOOR_START)
    return theta


def _model(theta, windows, vpd0):
    """Modelled NEE (windows x records) and its Jacobian (windows x records x 4)."""
    alpha = theta[:, _ALPHA, None]
    beta0 = theta[:, _BETA0, None]
    k = theta[:, _K, None]
    rref = theta[:, _RREF, None]
    rg, vpd, factor = windows["rg"], windows["vpd"], windows["factor"]
    gpp = light_response(rg, vpd, alpha, beta0, k, vpd0=vpd0)
    d_alpha, d_beta0, d_k = light_response_derivatives(rg, vpd, alpha, beta0, k, vpd0=vpd0)
    jacobian = np.stack([-d_alpha, -d_beta0, -d_k, factor], axis=-1)
    return rref * factor - gpp, jacobian


def _residuals(theta, windows, mask, vpd0):
    modelled, jacobian = _model(theta, windows, vpd0)
    residual = np.where(mask, modelled - windows["nee"], 0.0)
    jacobian = np.where(mask[:, :, None], jacobian, 0.0)
    return residual, jacobian, 0.5 * (residual**2).sum(axis=1)


def _levenberg_marquardt(theta, fixed, lower, upper, windows, mask, vpd0, max_iterations):
    """Bounded Levenberg–Marquardt over all windows at once.

    Bounds are kept by projection with an active set: a parameter at a bound
    whose gradient points outwards is held for that step (common practice for
    box-constrained Gauss–Newton methods). Damping follows Marquardt (1963):
    ``(J^T J + lambda diag(J^T J)) delta = -J^T r``. A window has converged when
    an accepted step changes the cost by less than a relative 1e-10, or moves
    every parameter by less than a relative 1e-8, or when the remaining
    Gauss–Newton step would move the fit by less than 0.01 standard errors
    (``delta^T J^T J delta <= 1e-4 s^2``), or when no damping gives a smaller
    cost (our choices of tolerance).
    """
    theta = theta.copy()
    count = len(theta)
    damping = np.full(count, _LAMBDA_START)
    done = fixed.all(axis=1)
    converged = done.copy()
    for _ in range(max_iterations):
        active = np.flatnonzero(~done)
        if len(active) == 0:
            break
        subset = {name: windows[name][active] for name in _MODEL_INPUTS}
        theta[active], damping[active], finished = _marquardt_step(
            theta[active], fixed[active], lower, upper, subset, mask[active], vpd0,
            damping[active])
        converged[active] = finished
        done[active] = finished
    return theta, converged


def _marquardt_step(theta, fixed, lower, upper, windows, mask, vpd0, damping):
    """One damped, bounded Gauss–Newton step for each window; returns convergence."""
    identity = np.eye(4)
    points = mask.sum(axis=1)
    residual, jacobian, cost = _residuals(theta, windows, mask, vpd0)
    gradient = np.einsum("wpi,wp->wi", jacobian, residual)
    normal = np.einsum("wpi,wpj->wij", jacobian, jacobian)
    diagonal = np.diagonal(normal, axis1=1, axis2=2)
    hold = (fixed | ((theta <= lower) & (gradient > 0)) | ((theta >= upper) & (gradient < 0))
            | (diagonal <= 0))
    keep = ~hold
    pair = keep[:, :, None] & keep[:, None, :]
    descent = np.where(keep, -gradient, 0.0)[:, :, None]
    scaling = diagonal[:, :, None] * identity
    undamped = np.where(pair, normal + 1e-12 * scaling, 0.0) + hold[:, :, None] * identity
    newton_step = np.linalg.solve(undamped, descent)[:, :, 0]
    predicted = np.einsum("wi,wi->w", newton_step, -gradient * keep)
    variance = 2.0 * cost / np.maximum(points - keep.sum(axis=1), 1)
    negligible = predicted <= (_SE_TOL**2) * variance
    damped = np.where(pair, normal + damping[:, None, None] * scaling, 0.0)
    damped = damped + hold[:, :, None] * identity
    step = np.linalg.solve(damped, descent)[:, :, 0]
    trial = np.clip(theta + step, lower, upper)
    _, _, trial_cost = _residuals(trial, windows, mask, vpd0)
    better = ~negligible & np.isfinite(trial_cost) & (trial_cost <= cost)
    small_change = better & ((cost - trial_cost) <= _FTOL * np.maximum(cost, 1e-300))
    small_step = better & np.all(np.abs(trial - theta) <= _XTOL * (np.abs(theta) + _XTOL),
                                 axis=1)
    damping = np.where(negligible, damping, np.where(better, damping / 3.0, damping * 4.0))
    stalled = damping > _LAMBDA_MAX
    theta = np.where(better[:, None], trial, theta)
    return theta, damping, negligible | small_change | small_step | stalled


def _standard_errors(theta, fixed, lower, upper, windows, mask, vpd0):
    """Standard errors from (J^T J)^-1 s^2 over the free parameters, and the fit RMSE."""
    residual, jacobian, _ = _residuals(np.nan_to_num(theta), windows, mask, vpd0)
    points = mask.sum(axis=1)
    normal = np.einsum("wpi,wpj->wij", jacobian, jacobian)
    diagonal = np.diagonal(normal, axis1=1, axis2=2)
    free = ~fixed & (theta > lower) & (theta < upper) & (diagonal > 0)
    free_count = free.sum(axis=1)
    sum_squares = (residual**2).sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        variance = np.where(points > free_count, sum_squares / (points - free_count), np.nan)
        rmse = np.where(points > 0, np.sqrt(sum_squares / points), np.nan)
    identity = np.eye(4)
    # Invert the correlation form D^-1/2 N D^-1/2 so that the very different
    # scales of the parameters do not count as ill-conditioning.
    scale = np.where(free, 1.0 / np.sqrt(np.where(diagonal > 0, diagonal, 1.0)), 0.0)
    correlation = normal * scale[:, :, None] * scale[:, None, :]
    correlation = correlation + (~free)[:, :, None] * identity
    well_posed = np.linalg.cond(correlation) < _MAX_CONDITION
    inverse = np.full_like(correlation, np.nan)
    if well_posed.any():
        inverse[well_posed] = (np.linalg.inv(correlation[well_posed])
                               * scale[well_posed][:, :, None] * scale[well_posed][:, None, :])
    with np.errstate(invalid="ignore"):
        errors = np.sqrt(np.diagonal(inverse, axis1=1, axis2=2) * variance[:, None])
    return np.where(free, errors, np.nan), rmse


def _judge(theta, standard_errors, fixed, fitted, converged, lower, upper):
    """Accept or reject each window; return flags and reasons."""
    alpha, beta0, rref = theta[:, _ALPHA], theta[:, _BETA0], theta[:, _RREF]
    with np.errstate(invalid="ignore"):
        interior = ~fixed & (theta > lower) & (theta < upper)
        interior[:, [_BETA0, _K]] &= (alpha > 0)[:, None]
        singular = (interior & ~np.isfinite(standard_errors)).any(axis=1)
    rules = [
        (~fitted, "too few points"),
        (~converged, "no convergence"),
        (alpha >= upper[_ALPHA], "alpha at upper bound"),
        (rref <= 0, "rref at zero"),
        (singular, "singular fit"),
    ]
    accepted = np.ones(len(theta), dtype=bool)
    reason = np.full(len(theta), "ok", dtype=object)
    for condition, why in rules:
        reason[accepted & condition] = why
        accepted &= ~condition
    reason[accepted & (alpha <= lower[_ALPHA])] = "alpha at lower bound"
    reason[accepted & (alpha > 0) & (beta0 >= upper[_BETA0])] = "beta0 at upper bound"
    return accepted, reason.astype(str)


def _interpolate_parameters(days, centres, theta, accepted):
    """Parameters per record: linear in time between accepted window centres."""
    per_record = np.empty((len(days), 4))
    light_identified = accepted & (theta[:, _ALPHA] > 0)
    for column, usable in ((_ALPHA, accepted), (_BETA0, light_identified),
                           (_K, light_identified), (_RREF, accepted)):
        if usable.any():
            per_record[:, column] = np.interp(days, centres[usable], theta[usable, column])
        else:
            per_record[:, column] = 0.0
    return per_record


def _parameter_table(index, starts, ends, windows, theta, standard_errors, rmse, accepted,
                     reason, k_fixed) -> pd.DataFrame:
    origin = index[0].normalize()
    to_time = lambda offsets: origin + pd.to_timedelta(offsets, unit="D")  # noqa: E731
    table = pd.DataFrame({
        "window_start": to_time(starts),
        "window_end": to_time(ends),
        "window_centre": to_time((starts + ends) / 2.0),
        "points": windows["points"].astype(np.int64),
        "night_points": windows["night_points"].astype(np.int64),
        "alpha": theta[:, _ALPHA],
        "beta0": theta[:, _BETA0],
        "k": theta[:, _K],
        "rref": theta[:, _RREF],
        "e0": windows["e0"],
        "alpha_se": standard_errors[:, _ALPHA],
        "beta0_se": standard_errors[:, _BETA0],
        "k_se": standard_errors[:, _K],
        "rref_se": standard_errors[:, _RREF],
        "rmse": rmse,
        "accepted": accepted,
        "reason": reason,
        "k_fixed": k_fixed,
    })
    return table[list(PARAMETER_COLUMNS)]
