"""Response functions of ecosystem fluxes to their drivers (pure math, vectorised).

Each function takes arrays and returns arrays; where fitting uses them, the
analytic partial derivatives are provided beside the function.
"""

from __future__ import annotations

import numpy as np

from .constants import KELVIN_OFFSET, LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN

#: VPD above which the light-saturated assimilation declines [hPa]; Lasslop et al.
#: (2010), Global Change Biology 16:187–208, eq. 4: VPD0 = 10 hPa (m).
LASSLOP_VPD0_HPA = 10.0

__all__ = [
    "LASSLOP_VPD0_HPA",
    "exponential_equivalent_temperature",
    "light_response",
    "light_response_derivatives",
    "lloyd_taylor",
    "lloyd_taylor_derivatives",
    "non_rectangular_hyperbola",
    "vpd_limited_beta",
]


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


def exponential_equivalent_temperature(temperature, *, tref_kelvin=LLOYD_TAYLOR_TREF_KELVIN,
                                       t0_kelvin=LLOYD_TAYLOR_T0_KELVIN):
    """Temperature T* at which Lloyd–Taylor gives an exponential (Q10) response of T.

    Parameters
    ----------
    temperature : array_like
        Temperature T [°C]; below Tref + 2 (Tref − T0) (122 °C by default).
    tref_kelvin, t0_kelvin : float, optional
        Lloyd–Taylor's reference temperature and T0 [K], as in :func:`lloyd_taylor`.

    Returns
    -------
    numpy.ndarray
        T* [°C], such that ``lloyd_taylor(T*, Rref, E0) = Rref exp(k (T − Tref))``
        with k = E0 / (2 D²), D = Tref − T0: the exponential (constant-Q10) form,
        Q10 = exp(10 k). NaN where T is out of range.

    Notes
    -----
    Lloyd–Taylor's exponent is E0 (1/D − 1/(T − T0)). Setting
    1/(T* − T0) = 1/D − (T − Tref)/(2 D²), i.e. T* = T0 + 2D² / (2D − (T − Tref)),
    makes it E0 (T − Tref)/(2 D²), linear in T. T* = Tref at T = Tref and
    dT*/dT = 1/2 there; with D = 56.02 K, T from −60 to +60 °C maps to T* from
    −11.5 to +55.2 °C. Fitting Lloyd–Taylor to T* is therefore fitting the
    exponential form with the same code, E0 standing for 2D²·k: E0 from 60 to
    900 K spans Q10 from 1.10 to 4.20, the sensitivity d ln R / dT = E0 / D² that
    Lloyd–Taylor's own E0 range of 30–450 K has at Tref, times 10 in the exponent.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323 (eq. 11, and the
    exponential Q10 form it is compared with). doi:10.2307/2389824
    """
    kelvin = np.asarray(temperature, dtype=float) + KELVIN_OFFSET
    span = tref_kelvin - t0_kelvin
    denominator = 2.0 * span - (kelvin - tref_kelvin)
    with np.errstate(divide="ignore", invalid="ignore"):
        star = t0_kelvin + 2.0 * span**2 / denominator
    return np.where(denominator > 0, star - KELVIN_OFFSET, np.nan)


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
    # a trial step of the fit can overflow (E0 far out): the step is then rejected on its
    # non-finite sum of squares, so NumPy's overflow note would only alarm the user
    with np.errstate(over="ignore", invalid="ignore"):
        d_rref = np.exp(np.asarray(e0, dtype=float) * term)
        respiration = np.asarray(rref, dtype=float) * d_rref
        return d_rref, respiration * term


def _vpd_excess(vpd, vpd0):
    """VPD above the threshold, zero below it [hPa]; NaN stays NaN."""
    excess = np.asarray(vpd, dtype=float) - vpd0
    return np.where(excess > 0.0, excess, np.where(np.isnan(excess), np.nan, 0.0))


def vpd_limited_beta(vpd, beta0, k, *, vpd0=LASSLOP_VPD0_HPA):
    """Light-saturated assimilation reduced exponentially by high VPD.

    Parameters
    ----------
    vpd : array_like
        Vapour pressure deficit [hPa].
    beta0 : array_like
        Light-saturated assimilation at VPD at or below `vpd0` [µmol m-2 s-1].
    k : array_like
        Rate of the exponential decline with VPD [hPa-1].
    vpd0 : float, optional
        VPD below which there is no limitation [hPa]; default 10 hPa,
        Lasslop et al. (2010) (m).

    Returns
    -------
    numpy.ndarray
        ``beta`` [µmol m-2 s-1]: ``beta0 exp(-k (VPD - VPD0))`` where VPD > VPD0,
        ``beta0`` elsewhere; NaN where `vpd` is NaN.

    Notes
    -----
    Lasslop et al. (2010), eq. 4 (m).

    References
    ----------
    Lasslop, G., Reichstein, M., Papale, D., Richardson, A. D., Arneth, A.,
    Barr, A., Stoy, P. & Wohlfahrt, G. (2010). Separation of net ecosystem
    exchange into assimilation and respiration using a light response curve
    approach: critical issues and global evaluation. Global Change Biology
    16:187–208. doi:10.1111/j.1365-2486.2009.02041.x
    """
    excess = _vpd_excess(vpd, vpd0)
    with np.errstate(over="ignore", invalid="ignore"):
        return np.asarray(beta0, dtype=float) * np.exp(-np.asarray(k, dtype=float) * excess)


def light_response(rg, vpd, alpha, beta0, k, *, vpd0=LASSLOP_VPD0_HPA, curvature=0.0):
    """Gross primary production by the rectangular hyperbola with VPD limitation.

    Parameters
    ----------
    rg : array_like
        Global radiation [W m-2]; values at or below zero give zero GPP.
    vpd : array_like
        Vapour pressure deficit [hPa].
    alpha : array_like
        Initial slope of the light response, the canopy light-use efficiency
        [µmol J-1] (µmol CO2 per joule of global radiation).
    beta0 : array_like
        Light-saturated assimilation at VPD at or below `vpd0` [µmol m-2 s-1].
    k : array_like
        Rate of the exponential decline of the saturated assimilation with VPD
        [hPa-1].
    vpd0 : float, optional
        VPD threshold of the limitation [hPa]; default 10 hPa, Lasslop et al.
        (2010) (m).
    curvature : float, optional
        Curvature of the light response [1], 0 ≤ curvature < 1. Default 0: the
        rectangular hyperbola of Lasslop et al. (2010). Above 0 the saturation is
        sharper: :func:`non_rectangular_hyperbola` with ``pmax = beta``.

    Returns
    -------
    numpy.ndarray
        GPP, positive for uptake [µmol m-2 s-1]; zero where ``rg <= 0`` (whatever
        the other inputs) or where ``alpha Rg + beta`` is zero, otherwise NaN
        where an input is NaN.

    Notes
    -----
    ``GPP = alpha beta Rg / (alpha Rg + beta)`` with
    ``beta = beta0 exp(-k (VPD - VPD0))`` for VPD > VPD0 and ``beta = beta0``
    otherwise, Lasslop et al. (2010), eqs. 3–4 (m). The slope at ``Rg -> 0`` is
    ``alpha``, the limit at ``Rg -> inf`` is ``beta``, and ``alpha Rg = beta``
    gives half of ``beta``. The net exchange of the daytime model is
    ``NEE = -GPP + Reco`` (positive = release), Reco by :func:`lloyd_taylor`.

    References
    ----------
    Lasslop, G. et al. (2010). Global Change Biology 16:187–208.
    doi:10.1111/j.1365-2486.2009.02041.x

    Falge, E. et al. (2001). Gap filling strategies for defensible annual sums
    of net ecosystem exchange. Agricultural and Forest Meteorology 107:43–69.
    doi:10.1016/S0168-1923(00)00225-2 (the rectangular hyperbola in this form (m)).
    """
    if curvature != 0.0:
        beta = vpd_limited_beta(vpd, beta0, k, vpd0=vpd0)
        gpp = non_rectangular_hyperbola(rg, alpha, beta, curvature)
        with np.errstate(invalid="ignore"):
            return np.where(np.asarray(rg, dtype=float) <= 0.0, 0.0, gpp)
    light = np.clip(np.asarray(rg, dtype=float), 0.0, None)
    light = np.where(np.isnan(rg), np.nan, light)
    alpha = np.asarray(alpha, dtype=float)
    beta = vpd_limited_beta(vpd, beta0, k, vpd0=vpd0)
    denominator = alpha * light + beta
    with np.errstate(divide="ignore", invalid="ignore"):
        gpp = alpha * beta * light / denominator
    return np.where((light == 0.0) | (denominator == 0.0), 0.0, gpp)


def light_response_derivatives(rg, vpd, alpha, beta0, k, *, vpd0=LASSLOP_VPD0_HPA):
    """Partial derivatives of :func:`light_response` wrt `alpha`, `beta0` and `k`.

    Parameters
    ----------
    rg, vpd, alpha, beta0, k, vpd0
        As in :func:`light_response`.

    Returns
    -------
    d_alpha : numpy.ndarray
        dGPP/dalpha = beta² Rg / (alpha Rg + beta)² [J m-2 s-1 = W m-2].
    d_beta0 : numpy.ndarray
        dGPP/dbeta0 = (alpha Rg)² / (alpha Rg + beta)² · beta/beta0 [1].
    d_k : numpy.ndarray
        dGPP/dk = -(alpha Rg)² / (alpha Rg + beta)² · beta (VPD - VPD0)+
        [µmol m-2 s-1 hPa].

    Notes
    -----
    Where ``alpha Rg + beta`` is zero (no light and no capacity) the derivatives
    are set to zero; at ``rg <= 0`` all three are zero.

    References
    ----------
    Lasslop, G. et al. (2010). Global Change Biology 16:187–208.
    doi:10.1111/j.1365-2486.2009.02041.x
    """
    light = np.clip(np.asarray(rg, dtype=float), 0.0, None)
    light = np.where(np.isnan(rg), np.nan, light)
    alpha = np.asarray(alpha, dtype=float)
    excess = _vpd_excess(vpd, vpd0)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        reduction = np.exp(-np.asarray(k, dtype=float) * excess)
        beta = np.asarray(beta0, dtype=float) * reduction
        denominator = alpha * light + beta
        inverse_square = np.where(denominator == 0.0, 0.0, 1.0 / denominator**2)
        d_alpha = beta**2 * light * inverse_square
        d_beta = (alpha * light) ** 2 * inverse_square
        d_beta0 = d_beta * reduction
        d_k = -d_beta * beta * excess
    dark = light == 0.0
    return (np.where(dark, 0.0, d_alpha), np.where(dark, 0.0, d_beta0),
            np.where(dark, 0.0, d_k))


def non_rectangular_hyperbola(rg, alpha, pmax, theta):
    """Gross primary production by the non-rectangular hyperbola (an alternative).

    Parameters
    ----------
    rg : array_like
        Global radiation [W m-2]; values at or below zero give zero GPP.
    alpha : array_like
        Initial slope of the light response [µmol J-1].
    pmax : array_like
        Light-saturated assimilation [µmol m-2 s-1].
    theta : array_like
        Curvature, 0 ≤ theta ≤ 1 [1]: 0 gives the rectangular hyperbola, 1 the
        Blackman response ``min(alpha Rg, pmax)``.

    Returns
    -------
    numpy.ndarray
        GPP, positive for uptake [µmol m-2 s-1].

    Raises
    ------
    ValueError
        If `theta` lies outside [0, 1].

    Notes
    -----
    GPP is the smaller root of ``theta P² - (alpha I + Pmax) P + alpha I Pmax = 0``
    (Johnson & Thornley 1984, eq. 2 (m)), evaluated in the cancellation-free
    form ``P = 2 alpha I Pmax / (alpha I + Pmax + sqrt((alpha I + Pmax)² -
    4 theta alpha I Pmax))``, which equals the rectangular hyperbola at
    ``theta = 0``. Used for flux data by Gilmanov et al. (2003) (m).

    References
    ----------
    Johnson, I. R. & Thornley, J. H. M. (1984). A model of instantaneous and
    daily canopy photosynthesis. Journal of Theoretical Biology 107:531–545.
    doi:10.1016/S0022-5193(84)80131-9 (m)

    Gilmanov, T. G. et al. (2003). Gross primary production and light response
    parameters of four Southern Plains ecosystems estimated using long-term
    CO2-flux tower measurements. Global Biogeochemical Cycles 17(2), 1071.
    doi:10.1029/2002GB002023 (m)
    """
    theta = np.asarray(theta, dtype=float)
    if np.any((theta < 0.0) | (theta > 1.0)):
        raise ValueError(f"theta = {theta!r}: the curvature must lie in [0, 1]")
    light = np.clip(np.asarray(rg, dtype=float), 0.0, None)
    light = np.where(np.isnan(rg), np.nan, light)
    initial = np.asarray(alpha, dtype=float) * light
    pmax = np.asarray(pmax, dtype=float)
    total = initial + pmax
    discriminant = np.clip(total**2 - 4.0 * theta * initial * pmax, 0.0, None)
    denominator = total + np.sqrt(discriminant)
    with np.errstate(divide="ignore", invalid="ignore"):
        gpp = 2.0 * initial * pmax / denominator
    return np.where(denominator == 0.0, 0.0, gpp)
