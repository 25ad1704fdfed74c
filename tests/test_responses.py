"""Tests of fluxpart.responses: response functions of fluxes to their drivers."""

import numpy as np
import pytest
from conftest import load_reference

from fluxpart.constants import (
    LLOYD_TAYLOR_E0_KELVIN,
    LLOYD_TAYLOR_T0_KELVIN,
    LLOYD_TAYLOR_TREF_KELVIN,
)
from fluxpart.responses import lloyd_taylor, lloyd_taylor_derivatives

# --------------------------------------------------------------------------- #
# Lloyd–Taylor
# --------------------------------------------------------------------------- #
LLOYD_TAYLOR = load_reference("lloyd_taylor")


def test_lloyd_taylor_constants_match_paper():
    """Constants equal Lloyd & Taylor (1994) eq. 11 (reference/lloyd_taylor.toml)."""
    constants = LLOYD_TAYLOR["constants"]
    assert LLOYD_TAYLOR_E0_KELVIN == constants["e0_kelvin"]
    assert LLOYD_TAYLOR_T0_KELVIN == constants["t0_kelvin"]
    assert LLOYD_TAYLOR_TREF_KELVIN == constants["tref_kelvin"]


def test_lloyd_taylor_equals_rref_at_reference_temperature():
    """R(10 °C) = Rref by the definition of Rref, Lloyd & Taylor (1994) eq. 11."""
    rref = np.array([0.5, 2.0, 7.3])
    np.testing.assert_allclose(lloyd_taylor(10.0, rref, LLOYD_TAYLOR_E0_KELVIN), rref,
                               rtol=1e-15)


def test_lloyd_taylor_published_curve():
    """The paper's curve: R(T)/R(10 °C) from Lloyd & Taylor (1994) eq. 11."""
    curve = LLOYD_TAYLOR["curve"]
    temperature = np.array(curve["temperature_celsius"])
    expected = 3.0 * np.array(curve["relative_rate"])
    got = lloyd_taylor(temperature, 3.0, LLOYD_TAYLOR["constants"]["e0_kelvin"])
    # tolerance: the reference values are rounded to 6 significant digits
    np.testing.assert_allclose(got, expected, rtol=curve["relative_tolerance"])


def test_lloyd_taylor_doubles_per_ten_degrees():
    """R(20)/R(10) ≈ 2.303 (eq. 11); common practice: roughly doubles per 10 °C."""
    ratio_reference = LLOYD_TAYLOR["ratio_20_to_10"]
    ratio = (lloyd_taylor(20.0, 1.0, LLOYD_TAYLOR_E0_KELVIN)
             / lloyd_taylor(10.0, 1.0, LLOYD_TAYLOR_E0_KELVIN))
    assert ratio_reference["common_practice_low"] < ratio < ratio_reference["common_practice_high"]
    assert ratio == pytest.approx(ratio_reference["value"], abs=ratio_reference["tolerance"])


def test_lloyd_taylor_increases_with_temperature():
    """Respiration rises monotonically with temperature for E0 > 0 (eq. 11)."""
    temperature = np.linspace(-40.0, 45.0, 200)
    values = lloyd_taylor(temperature, 2.0, 150.0)
    assert np.all(np.diff(values) > 0)


def test_lloyd_taylor_broadcasts_parameters_per_record():
    """Per-record Rref and E0 arrays broadcast against the temperature array."""
    temperature = np.array([0.0, 10.0, 20.0])
    rref = np.array([1.0, 2.0, 3.0])
    e0 = np.array([100.0, 200.0, 300.0])
    expected = [lloyd_taylor(t, r, e) for t, r, e in zip(temperature, rref, e0, strict=True)]
    np.testing.assert_allclose(lloyd_taylor(temperature, rref, e0), expected)


def test_lloyd_taylor_nan_and_below_t0():
    """NaN temperature gives NaN; at or below T0 = 227.13 K (-46.02 °C) the model is undefined."""
    t0_celsius = LLOYD_TAYLOR_T0_KELVIN - 273.15
    values = lloyd_taylor(np.array([np.nan, t0_celsius, t0_celsius - 5.0, 5.0]), 2.0, 200.0)
    assert np.isnan(values[:3]).all()
    assert np.isfinite(values[3])


def test_lloyd_taylor_derivatives_against_finite_differences():
    """Analytic dR/dRref and dR/dE0 agree with central finite differences."""
    temperature = np.array([-15.0, 0.0, 8.0, 10.0, 22.0, 35.0])
    rref, e0 = 2.7, 240.0
    d_rref, d_e0 = lloyd_taylor_derivatives(temperature, rref, e0)
    h_rref, h_e0 = 1e-6 * rref, 1e-5 * e0
    fd_rref = (lloyd_taylor(temperature, rref + h_rref, e0)
               - lloyd_taylor(temperature, rref - h_rref, e0)) / (2 * h_rref)
    fd_e0 = (lloyd_taylor(temperature, rref, e0 + h_e0)
             - lloyd_taylor(temperature, rref, e0 - h_e0)) / (2 * h_e0)
    # central differences: truncation error O(h²) ≈ 1e-10 relative, rounding ≈ 1e-10
    np.testing.assert_allclose(d_rref, fd_rref, rtol=1e-7)
    np.testing.assert_allclose(d_e0, fd_e0, rtol=1e-7, atol=1e-12)


def test_lloyd_taylor_derivatives_nan_propagates():
    """A NaN temperature gives NaN derivatives, finite ones elsewhere."""
    d_rref, d_e0 = lloyd_taylor_derivatives(np.array([np.nan, 12.0]), 1.5, 200.0)
    assert np.isnan(d_rref[0]) and np.isnan(d_e0[0])
    assert np.isfinite(d_rref[1]) and np.isfinite(d_e0[1])


def test_lloyd_taylor_does_not_modify_inputs():
    """Inputs are left untouched."""
    temperature = np.array([1.0, np.nan, 20.0])
    before = temperature.copy()
    lloyd_taylor(temperature, 2.0, 200.0)
    lloyd_taylor_derivatives(temperature, 2.0, 200.0)
    np.testing.assert_array_equal(temperature, before)


def test_lloyd_taylor_derivatives_of_a_runaway_trial_step_overflow_without_a_warning():
    """A Levenberg–Marquardt trial step can take E0 far out; exp(E0 (1/(Tref - T0) -
    1/(T - T0))) (Lloyd & Taylor 1994, eq. 11) then overflows to inf, the step's sum of
    squares is not finite and the step is rejected. No NumPy overflow note reaches the
    user (regression: 'RuntimeWarning: overflow encountered in multiply' printed 10 times
    by a run whose NEE gaps had been filled by linear interpolation)."""
    import warnings

    from fluxpart.responses import lloyd_taylor_derivatives

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        d_rref, d_e0 = lloyd_taylor_derivatives(np.array([30.0, 35.0]), np.array([[1e300]]),
                                                np.array([[5e4]]))
    assert np.all(d_rref > 0) and np.all(np.isinf(d_e0))
