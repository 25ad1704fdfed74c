"""Robust scale: the median absolute deviation scaled to a normal standard deviation.

The median absolute deviation (MAD) of a normal sample, times the consistency constant
1/Φ⁻¹(3/4) = 1.482602..., estimates its standard deviation; unlike the standard deviation
it is not moved by a few wild values (breakdown point 50 %). The package writes the
constant as 1.4826, its five significant digits as the robust-statistics literature
gives it. Tested against ``scipy.stats.median_abs_deviation(..., scale="normal")``.

Screening's despiking divides by 0.6745 instead, the form Papale et al. (2006) publish
(:mod:`fluxpart.screening`); its results are kept as they are.

References
----------
Rousseeuw, P. J. & Croux, C. (1993). Alternatives to the median absolute deviation.
Journal of the American Statistical Association 88:1273–1283.
doi:10.1080/01621459.1993.10476408
"""

from __future__ import annotations

import numpy as np

__all__ = ["MAD_TO_SIGMA", "scaled_mad"]

#: Consistency constant that makes the MAD of a normal sample estimate its standard
#: deviation: 1/Φ⁻¹(3/4) = 1.482602... to five significant digits (Rousseeuw & Croux
#: 1993).
MAD_TO_SIGMA = 1.4826


def scaled_mad(values, centre=None, multiple: float = 1.0) -> float:
    """`multiple` × 1.4826 × the median absolute deviation of `values` from `centre`.

    Parameters
    ----------
    values : array_like
        Finite values, in any unit (a NaN makes the result NaN: callers drop them);
        computed in their own float type, as the inline formula it replaced was.
    centre : float, optional
        The value the deviations are taken from; the median of `values` by default
        (0 for changes between records, whose centre is no change).
    multiple : float, default 1
        How many scaled MADs: a bound of 5 scaled MADs is ``multiple=5`` (computed as
        ``(multiple × 1.4826) × MAD``, the order the inline bounds had).

    Returns
    -------
    float
        The robust standard deviation, in the unit of `values`; NaN for no values.

    References
    ----------
    Rousseeuw, P. J. & Croux, C. (1993). Alternatives to the median absolute deviation.
    Journal of the American Statistical Association 88:1273–1283.
    """
    values = np.asarray(values)
    if centre is None:
        centre = np.median(values)
    return float(multiple * MAD_TO_SIGMA * np.median(np.abs(values - centre)))
