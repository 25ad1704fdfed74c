"""The one-sort quantile of fluxpart._quantile against numpy.nanquantile (the reference)."""

import warnings

import numpy as np
import pytest

from fluxpart._quantile import nanquantile


@pytest.mark.parametrize("axis", [0, 1])
def test_nanquantile_equals_numpy_bit_for_bit(axis):
    """Linear interpolation as numpy.nanquantile computes it, to the last bit, with NaNs,
    ties, all-NaN slices, the end quantiles and several quantiles at once."""
    rng = np.random.default_rng(12)
    for _ in range(60):
        rows, columns = rng.integers(1, 35), rng.integers(1, 50)
        block = rng.normal(300.0, 200.0, size=(rows, columns))
        block[rng.random((rows, columns)) < rng.uniform(0.0, 0.9)] = np.nan
        if rng.random() < 0.3:
            block = np.round(block, -2)                  # ties
        for q in (0.0, 0.05, 0.5, 0.9, 1.0, 1.0 / 3.0, [0.03, 0.97]):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)   # all-NaN slices
                expected = np.nanquantile(block, q, axis=axis)
            got = nanquantile(block, q, axis=axis)
            assert got.shape == expected.shape
            np.testing.assert_array_equal(got, expected)


def test_nanquantile_refuses_other_shapes():
    with pytest.raises(ValueError, match="2-D"):
        nanquantile(np.zeros(5), 0.5)
