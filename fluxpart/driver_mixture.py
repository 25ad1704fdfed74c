"""The share of the other respiration temperature in the mixture that best fits the night.

Night respiration is the sum of parts that follow different temperatures: the soil's
(heterotrophic and root respiration, on soil temperature) and the canopy's (leaves and
stems, on air temperature). The nighttime method drives its Reco with one of the two
(:mod:`fluxpart.partition.temperature_choice`), and the uncertainty of that choice was the
BIC weight of the other temperature (:func:`fluxpart.uncertainty.driver_weight`). A BIC
weight is the probability that one of two models is the true one; where the truth is a
mixture of both, neither is true, and over thousands of night records the weight goes to
0 or 1 for whichever fits a little better, while the annual Reco of the true mixture lies
between the two fits. This module measures how far between: the convex combination of
the two fitted Reco series that fits the measured night NEE best (a stacked regression
with weights that are non-negative and sum to one), by least absolute deviations, the
error model of the E0 fit.

References
----------
Breiman, L. (1996). Stacked regressions. Machine Learning 24, 49–64 (combinations of
predictors with non-negative weights fitted to the data) (m).

Koenker, R. & Bassett, G. (1978). Regression quantiles. Econometrica 46, 33–50 (the
least-absolute-deviation fit of one coefficient through the origin is a weighted median)
(m).

Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance measurements
and its application to physiological models. Tree Physiology 25, 873–885 (flux errors
double-exponential: least absolute deviations are their maximum likelihood).
"""
from __future__ import annotations

import numpy as np

__all__ = ["MIN_RECORDS", "mixture_share"]

#: Fewer shared night records than this leave the share 0 (as in
#: :func:`fluxpart.uncertainty.driver_weight`).
MIN_RECORDS = 10


def mixture_share(nee_measured, is_night, reco_central, reco_other) -> float:
    """The other temperature's share in the night's best mixture of the two Reco fits.

    Parameters
    ----------
    nee_measured : array_like
        Measured NEE kept by screening [µmol m-2 s-1]; NaN where missing or rejected.
    is_night : array_like of bool
        Night records.
    reco_central : array_like
        Nighttime Reco with the temperature in use [µmol m-2 s-1].
    reco_other : array_like
        Nighttime Reco with the other temperature [µmol m-2 s-1].

    Returns
    -------
    float
        s in [0, 1] minimising Σ |NEE − ((1 − s) Reco_central + s Reco_other)| over the
        night records where all three are finite and the two fits differ [1]: the
        weighted median of (NEE − Reco_central) / (Reco_other − Reco_central) with
        weights |Reco_other − Reco_central|, clipped to [0, 1]. 0 where fewer than
        :data:`MIN_RECORDS` such records exist.

    Notes
    -----
    The loss is convex and piecewise linear in s; its slope at s is
    Σ |d_i| (sign(s − r_i / d_i)), so the minimum lies where the weights |d_i| of the
    ratios below s reach half their total (Koenker & Bassett 1978 (m)). Ties in the
    ratios are ordered by record (a stable sort), so the share is the same on every
    machine. Where one temperature alone drives the flux, s stays near 0 (or 1); where
    both do, s estimates the share of the annual difference between the fits that the
    true Reco lies away from the central fit, as the mixture of two stacked
    predictors (Breiman 1996 (m)).

    References
    ----------
    Breiman, L. (1996). Stacked regressions. Machine Learning 24, 49–64 (m).
    Koenker, R. & Bassett, G. (1978). Regression quantiles. Econometrica 46, 33–50 (m).
    """
    nee = np.asarray(nee_measured, dtype=float)
    central = np.asarray(reco_central, dtype=float)
    other = np.asarray(reco_other, dtype=float)
    difference = other - central
    use = (np.asarray(is_night, dtype=bool) & np.isfinite(nee) & np.isfinite(central)
           & np.isfinite(other) & (difference != 0))
    if int(use.sum()) < MIN_RECORDS:
        return 0.0
    d = difference[use]
    ratio = (nee[use] - central[use]) / d
    weight = np.abs(d)
    order = np.argsort(ratio, kind="stable")
    cumulative = np.cumsum(weight[order])
    k = int(np.searchsorted(cumulative, 0.5 * cumulative[-1]))
    return float(np.clip(ratio[order][min(k, ratio.size - 1)], 0.0, 1.0))
