"""Tests of the light-response functions in fluxpart.responses."""

import math

import numpy as np
import pytest
from conftest import load_reference

from fluxpart.responses import (
    LASSLOP_VPD0_HPA,
    light_response,
    light_response_derivatives,
    non_rectangular_hyperbola,
    vpd_limited_beta,
)

REFERENCE = load_reference("light_response")


def test_vpd0_matches_paper():
    """VPD0 = 10 hPa, Lasslop et al. (2010) eq. 4 (m) (reference/light_response.toml)."""
    assert LASSLOP_VPD0_HPA == REFERENCE["vpd_limitation"]["vpd0_hpa"]


def test_hyperbola_values_worked_by_hand():
    """GPP = αβRg/(αRg+β) at hand-worked points (reference/light_response.toml)."""
    values = REFERENCE["hyperbola_values"]
    got = light_response(np.array(values["rg"]), np.array(values["vpd_hpa"]), values["alpha"],
                         values["beta0"], values["k"])
    np.testing.assert_allclose(got, values["gpp"], rtol=values["relative_tolerance"])


def test_initial_slope_is_alpha():
    """At Rg → 0 the slope dGPP/dRg equals α (definition of the hyperbola, Lasslop et al. 2010)."""
    alpha, beta0 = 0.04, 25.0
    rg = 1e-6
    slope = light_response(rg, 5.0, alpha, beta0, 0.03) / rg
    # GPP/Rg = αβ/(αRg+β) = α(1 − αRg/β + ...): relative departure ~ αRg/β = 1.6e-9.
    assert slope == pytest.approx(alpha, rel=1e-8)


def test_saturates_at_beta():
    """As Rg → ∞ GPP → β (Lasslop et al. 2010 eq. 3 (m)); relative gap β/(αRg)."""
    alpha, beta0 = 0.04, 25.0
    rg = 1e9
    # GPP/β = αRg/(αRg+β) = 1 − β/(αRg) + ...: relative gap 6.25e-7.
    assert light_response(rg, 5.0, alpha, beta0, 0.03) == pytest.approx(beta0, rel=1e-6)


def test_half_saturation_where_alpha_rg_equals_beta():
    """At αRg = β the hyperbola gives β/2 (Lasslop et al. 2010 eq. 3 (m))."""
    alpha, beta0 = np.array([0.01, 0.05, 0.2]), np.array([5.0, 30.0, 80.0])
    rg = beta0 / alpha
    np.testing.assert_allclose(light_response(rg, 8.0, alpha, beta0, 0.05), beta0 / 2,
                               rtol=1e-14)


def test_linear_at_low_light_saturating_at_high_light():
    """Common practice: light response is linear at low light and saturates at high light."""
    rg = np.array([5.0, 10.0, 1500.0, 3000.0])
    gpp = light_response(rg, 5.0, 0.05, 30.0, 0.0)
    low_ratio = gpp[1] / gpp[0]
    high_ratio = gpp[3] / gpp[2]
    assert low_ratio > 1.95          # doubling the light nearly doubles GPP
    assert high_ratio < 1.2          # doubling it at high light adds little
    assert np.all(np.diff(light_response(np.linspace(0, 2000, 50), 5.0, 0.05, 30.0, 0.0)) > 0)


def test_no_vpd_limitation_at_or_below_vpd0():
    """β = β0 for VPD ≤ VPD0 = 10 hPa, Lasslop et al. (2010) eq. 4 (m)."""
    vpd = np.array([0.0, 3.0, 9.99, 10.0])
    np.testing.assert_array_equal(vpd_limited_beta(vpd, 30.0, 0.08), 30.0)


def test_vpd_limitation_value_and_decline():
    """β = β0 exp(−k(VPD − 10)) above 10 hPa (Lasslop et al. 2010 eq. 4 (m)); value by hand."""
    values = REFERENCE["vpd_values"]
    got = vpd_limited_beta(values["vpd_hpa"], values["beta0"], values["k"])
    assert got == pytest.approx(values["beta0"] * values["reduction"],
                                rel=values["relative_tolerance"])
    assert values["reduction"] == pytest.approx(math.exp(-0.4), rel=1e-15)
    beta = vpd_limited_beta(np.linspace(10, 40, 31), 30.0, 0.04)
    assert np.all(np.diff(beta) < 0)
    high_vpd_gpp = light_response(1000.0, np.array([5.0, 15.0, 30.0]), 0.05, 30.0, 0.04)
    assert high_vpd_gpp[0] > high_vpd_gpp[1] > high_vpd_gpp[2]


def test_zero_at_night_and_nan_propagates():
    """GPP is 0 where Rg ≤ 0 and NaN where a driver is missing."""
    got = light_response(np.array([-3.0, 0.0, np.nan, 100.0]), np.array([5.0, 5.0, 5.0, np.nan]),
                         0.05, 30.0, 0.04)
    assert got[0] == 0.0 and got[1] == 0.0
    assert np.isnan(got[2]) and np.isnan(got[3])
    assert light_response(500.0, 5.0, 0.0, 0.0, 0.0) == 0.0
    assert light_response(0.0, np.nan, 0.05, 30.0, 0.04) == 0.0   # dark: no VPD needed


@pytest.mark.parametrize("vpd", [4.0, 18.0, 35.0])
def test_derivatives_match_central_differences(vpd):
    """Analytic partials agree with central finite differences (error O(h²), h = 1e-6 relative)."""
    rg = np.array([20.0, 300.0, 900.0, 1400.0])
    params = {"alpha": 0.045, "beta0": 28.0, "k": 0.035}
    analytic = dict(zip(params, light_response_derivatives(rg, vpd, **params), strict=True))
    for name, value in params.items():
        h = 1e-6 * value
        up = dict(params, **{name: value + h})
        down = dict(params, **{name: value - h})
        numeric = (light_response(rg, vpd, **up) - light_response(rg, vpd, **down)) / (2 * h)
        np.testing.assert_allclose(analytic[name], numeric, rtol=1e-6, atol=1e-9)


def test_derivative_wrt_k_zero_below_vpd0():
    """dGPP/dk = 0 where VPD ≤ VPD0: β does not depend on k there (eq. 4 (m))."""
    _, _, d_k = light_response_derivatives(np.array([100.0, 800.0]), 8.0, 0.05, 30.0, 0.04)
    np.testing.assert_array_equal(d_k, 0.0)


def test_inputs_not_modified():
    """The functions never write into their arguments."""
    rg = np.array([-1.0, 200.0, np.nan])
    vpd = np.array([5.0, 25.0, 12.0])
    before = rg.copy(), vpd.copy()
    light_response(rg, vpd, 0.05, 30.0, 0.04)
    light_response_derivatives(rg, vpd, 0.05, 30.0, 0.04)
    non_rectangular_hyperbola(rg, 0.05, 30.0, 0.7)
    np.testing.assert_array_equal(rg, before[0])
    np.testing.assert_array_equal(vpd, before[1])


def test_non_rectangular_hyperbola_limits():
    """θ = 0 is the rectangular hyperbola, θ = 1 the Blackman min(αI, Pmax) (Johnson & Thornley 1984 (m))."""
    rg = np.linspace(0, 2000, 41)
    np.testing.assert_allclose(non_rectangular_hyperbola(rg, 0.05, 30.0, 0.0),
                               light_response(rg, 5.0, 0.05, 30.0, 0.0), rtol=1e-13)
    np.testing.assert_allclose(non_rectangular_hyperbola(rg, 0.05, 30.0, 1.0),
                               np.minimum(0.05 * rg, 30.0), rtol=1e-7, atol=1e-12)


def test_non_rectangular_hyperbola_solves_its_quadratic():
    """GPP is the smaller root of θP² − (αI+Pmax)P + αIPmax = 0 (Johnson & Thornley 1984 eq. 2 (m))."""
    rg, alpha, pmax, theta = np.array([50.0, 400.0, 1200.0]), 0.05, 30.0, 0.7
    p = non_rectangular_hyperbola(rg, alpha, pmax, theta)
    initial = alpha * rg
    # Compare with numpy.roots (NumPy's general polynomial root finder), smaller root.
    for value, light in zip(p, initial, strict=True):
        roots = np.roots([theta, -(light + pmax), light * pmax])
        assert value == pytest.approx(roots.real.min(), rel=1e-10)
    # Curvature raises GPP at intermediate light (common practice: sharper bend).
    assert np.all(p > light_response(rg, 5.0, alpha, pmax, 0.0))


def test_non_rectangular_hyperbola_rejects_bad_curvature():
    """θ outside [0, 1] is an error naming theta."""
    with pytest.raises(ValueError, match="theta"):
        non_rectangular_hyperbola(100.0, 0.05, 30.0, 1.5)
