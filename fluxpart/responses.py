"""Response functions of ecosystem fluxes to their drivers (pure math, vectorised).

Each function takes arrays and returns arrays; where fitting uses them, the
analytic partial derivatives are provided beside the function.
"""

from __future__ import annotations

import numpy as np

from .constants import KELVIN_OFFSET, LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN

__all__ = ["lloyd_taylor", "lloyd_taylor_derivatives"]


def _arrhenius_term(temperature, tref_kelvin, t0_kelvin):
    kelvin = np.asarray(temperature, dtype=float) + KELVIN_OFFSET
    with np.errstate(divide="ignore", invalid="ignore"):
        return 1.0 / (tref_kelvin - t0_kelvin) - 1.0 / (kelvin - t0_kelvin)


def lloyd_taylor(temperature, rref, e0, *, tref_kelvin=LLOYD_TAYLOR_TREF_KELVIN,
                 t0_kelvin=LLOYD_TAYLOR_T0_KELVIN):
    """Ecosystem respiration by the Lloyd–Taylor equation.

    Parameters
    ----------
    temperature : array_like
        Driving temperature (air or soil) [°C].
    rref : array_like
        Respiration at the reference temperature [µmol m-2 s-1].
    e0 : array_like
        Temperature sensitivity, activation-energy-like parameter [K].
    tref_kelvin : float, optional
        Reference temperature [K]; default 283.15 K (10 °C), Lloyd & Taylor (1994).
    t0_kelvin : float, optional
        Temperature at which respiration vanishes [K]; default 227.13 K,
        Lloyd & Taylor (1994).

    Returns
    -------
    numpy.ndarray
        Respiration [µmol m-2 s-1]; NaN where the temperature is NaN or at or
        below ``t0_kelvin``.

    Notes
    -----
    ``R = Rref exp(E0 (1/(Tref - T0) - 1/(T - T0)))`` with T in kelvin,
    Lloyd & Taylor (1994), eq. 11.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8:315–323. doi:10.2307/2389824
    """
    term = _arrhenius_term(temperature, tref_kelvin, t0_kelvin)
    kelvin = np.asarray(temperature, dtype=float) + KELVIN_OFFSET
    with np.errstate(over="ignore", invalid="ignore"):
        out = np.asarray(rref, dtype=float) * np.exp(np.asarray(e0, dtype=float) * term)
    return np.where(kelvin > t0_kelvin, out, np.nan)


def lloyd_taylor_derivatives(temperature, rref, e0, *, tref_kelvin=LLOYD_TAYLOR_TREF_KELVIN,
                             t0_kelvin=LLOYD_TAYLOR_T0_KELVIN):
    """Partial derivatives of :func:`lloyd_taylor` with respect to `rref` and `e0`.

    Parameters
    ----------
    temperature, rref, e0, tref_kelvin, t0_kelvin
        As in :func:`lloyd_taylor`.

    Returns
    -------
    d_rref : numpy.ndarray
        dR/dRref [1].
    d_e0 : numpy.ndarray
        dR/dE0 [µmol m-2 s-1 K-1].

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    term = _arrhenius_term(temperature, tref_kelvin, t0_kelvin)
    with np.errstate(over="ignore", invalid="ignore"):
        d_rref = np.exp(np.asarray(e0, dtype=float) * term)
    respiration = np.asarray(rref, dtype=float) * d_rref
    return d_rref, respiration * term
