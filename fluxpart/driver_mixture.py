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

Künsch, H. R. (1989). The jackknife and the bootstrap for general stationary observations.
Annals of Statistics 17, 1217–1241 (resampling blocks of consecutive records) (m).

Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance measurements
and its application to physiological models. Tree Physiology 25, 873–885 (flux errors
double-exponential: least absolute deviations are their maximum likelihood).
"""
from __future__ import annotations

import numpy as np

__all__ = ["DEFAULT_TEST", "MIN_RECORDS", "ONE_SIDED_Z", "SHARE_DRAWS", "SHOWN_Z", "TESTS",
           "critical_value", "mixture_share", "mixture_share_draws", "mixture_shown",
           "share_day_weight", "unchanged_note"]

#: Fewer shared night records than this leave the share 0 (as in
#: :func:`fluxpart.uncertainty.driver_weight`).
MIN_RECORDS = 10

#: Resamplings of the nights in :func:`mixture_share_draws` (the share's spread to about
#: 5 % of itself, the usual order for a bootstrap standard error, Efron & Tibshirani 1993,
#: ch. 6 (m)).
SHARE_DRAWS = 200

#: The standard normal's 97.5 % quantile: a share whose two-sided 95 % interval excludes 0
#: is shown (:func:`mixture_shown`).
SHOWN_Z = 1.959964

#: The standard normal's 95 % quantile: the one-sided test at the 5 % level of a share
#: above 0 (``mixture_test = "one_sided"``, :func:`critical_value`).
ONE_SIDED_Z = 1.644854

#: The ``mixture_test`` settings and their critical values (:func:`critical_value`).
TESTS = {"two_sided": SHOWN_Z, "one_sided": ONE_SIDED_Z}

#: The ``mixture_test`` default, with which a run is that of release 0.39.0.
DEFAULT_TEST = "two_sided"


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
    ratios = _sorted_ratios(nee_measured, is_night, reco_central, reco_other)
    if ratios is None:
        return 0.0
    _, _, ratio, weight = ratios
    cumulative = np.cumsum(weight)
    k = int(np.searchsorted(cumulative, 0.5 * cumulative[-1]))
    return float(np.clip(ratio[min(k, ratio.size - 1)], 0.0, 1.0))


def _sorted_ratios(nee_measured, is_night, reco_central, reco_other):
    """The records and the ratios of :func:`mixture_share`'s weighted median, or None.

    Returns
    -------
    tuple of (numpy.ndarray, numpy.ndarray, numpy.ndarray, numpy.ndarray) or None
        ``(use, order, ratio, weight)``: the mask of the night records where NEE and both
        fits are finite and the fits differ, the stable sort of their ratios
        (NEE − Reco_central) / (Reco_other − Reco_central) [1], those ratios sorted, and
        their weights |Reco_other − Reco_central| in the same order [µmol m-2 s-1];
        None where fewer than :data:`MIN_RECORDS` records are used.
    """
    nee = np.asarray(nee_measured, dtype=float)
    central = np.asarray(reco_central, dtype=float)
    other = np.asarray(reco_other, dtype=float)
    difference = other - central
    use = (np.asarray(is_night, dtype=bool) & np.isfinite(nee) & np.isfinite(central)
           & np.isfinite(other) & (difference != 0))
    if int(use.sum()) < MIN_RECORDS:
        return None
    ratio = (nee[use] - central[use]) / difference[use]
    order = np.argsort(ratio, kind="stable")
    return use, order, ratio[order], np.abs(difference[use])[order]


def _night_blocks(index) -> np.ndarray:
    """The night of each record: whole days counted from noon to noon (local stamps)."""
    hours = (np.asarray(index, dtype="datetime64[ns]") - np.datetime64("1970-01-01T12:00", "ns")) \
        / np.timedelta64(1, "h")
    return np.floor(hours / 24.0).astype(np.int64)


def mixture_share_draws(nee_measured, is_night, reco_central, reco_other, index, *,
                        draws=SHARE_DRAWS, seed=0, clip=True) -> np.ndarray:
    """The mixture share of :func:`mixture_share` on nights resampled with replacement.

    Parameters
    ----------
    nee_measured, is_night, reco_central, reco_other
        As in :func:`mixture_share`.
    index : array_like of datetime64
        Record times (local): the records of one night, noon to noon, are resampled
        together.
    draws : int, optional
        Number of resamplings (:data:`SHARE_DRAWS`).
    seed : int, optional
        Seed of the resampling (fixed: the same input gives the same draws, whatever the
        run's ``seed`` setting and thread count).
    clip : bool, optional
        True (default): each draw clipped to [0, 1], as :func:`mixture_share` is; False:
        the unconstrained weighted median of the ratios, whose spread
        :func:`mixture_shown` needs.

    Returns
    -------
    numpy.ndarray
        `draws` shares, in [0, 1] with `clip` [1]; empty where :func:`mixture_share` has
        fewer than :data:`MIN_RECORDS` records.

    Notes
    -----
    The night residuals are correlated within a night, so whole nights are resampled
    (a block bootstrap, Künsch 1989 (m)); each draw is the weighted median of the same
    ratios with weights |Reco_other − Reco_central| times the number of times its night
    was drawn. The variance of the draws is the sampling variance of the share: where
    night air and soil temperature move together, the nights tell the share only
    roughly.

    References
    ----------
    Künsch, H. R. (1989). The jackknife and the bootstrap for general stationary
    observations. Annals of Statistics 17, 1217–1241 (m).
    Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
    Hall (m).
    """
    ratios = _sorted_ratios(nee_measured, is_night, reco_central, reco_other)
    if ratios is None:
        return np.empty(0)
    use, order, ratio, weight = ratios
    night = np.unique(_night_blocks(index)[use], return_inverse=True)[1][order]
    nights = int(night.max()) + 1
    rng = np.random.default_rng(seed)
    out = np.empty(int(draws))
    for k in range(out.size):
        cumulative = np.cumsum(weight * np.bincount(rng.integers(0, nights, nights),
                                                    minlength=nights)[night])
        at = int(np.searchsorted(cumulative, 0.5 * cumulative[-1]))
        out[k] = ratio[min(at, ratio.size - 1)]
    return np.clip(out, 0.0, 1.0) if clip else out


def critical_value(test: str) -> float:
    """The critical value of the mixture test named by the ``mixture_test`` setting.

    Parameters
    ----------
    test : str
        ``"two_sided"``: the share's two-sided 95 % interval excludes 0
        (:data:`SHOWN_Z`, the default); ``"one_sided"``: the share exceeds 0 at the
        one-sided 5 % level (:data:`ONE_SIDED_Z`).

    Returns
    -------
    float
        z of :func:`mixture_shown` [1].

    Notes
    -----
    The share of the other temperature is a weight in [0, 1]: the question the test
    answers is whether it lies above 0, so the alternative is one-sided and the test of
    H0: share = 0 against share > 0 at the 5 % level rejects where the estimate exceeds
    1.645 standard errors (Lehmann & Romano 2005, ch. 3 (m)); the two-sided interval of
    0.38.0 tests at 2.5 % on that side. Measured (DEVELOPERS.md, round partbias): on
    the two latest known-truth trials the one-sided test showed the mixture in more of
    the site-years that plant one, on generated site-years with one temperature it
    changed few intervals; left off by default.

    References
    ----------
    Lehmann, E. L. & Romano, J. P. (2005). Testing Statistical Hypotheses, 3rd ed.
    Springer (m).
    """
    return TESTS[test]


def mixture_shown(share: float, draws, z: float = SHOWN_Z) -> bool:
    """Whether the nights show a mixture: the share's 95 % interval excludes 0.

    Parameters
    ----------
    share : float
        :func:`mixture_share` [1].
    draws : array_like
        :func:`mixture_share_draws` of the same records with ``clip=False`` [1]; empty:
        not shown.
    z : float, optional
        The critical value [1]: :data:`SHOWN_Z` (default, the two-sided 95 % interval)
        or :data:`ONE_SIDED_Z` (the one-sided test at 5 %, :func:`critical_value`).

    Returns
    -------
    bool
        s − z·sd > 0, sd the standard deviation of the draws (the normal interval of a
        bootstrap standard error, Efron & Tibshirani 1993, ch. 13 (m)).

    Notes
    -----
    The test is that of the unconstrained estimate (the weighted median of the ratios),
    which equals the share wherever the share is inside (0, 1) and is at no boundary
    where the truth is 0: its bootstrap is regular there. Draws clipped to [0, 1] spread
    less (clipping is 1-Lipschitz, so it cannot raise a variance) and most where the
    share is near a clip, exactly where the test decides; a bootstrap of an estimate held
    to a boundary is not consistent there (Andrews 2000 (m)). Measured in round review87
    on the 168 generated site-years: the clipped draws showed a mixture at 7, the
    unclipped at 4 (three shares of 0.51–0.60 whose draws piled at 1 no longer shown);
    on trial 31 (two draws, 20 site runs) both showed the same 11.

    A respiration that follows one temperature leaves the share of the other within its
    sampling error of 0; a canopy part on air temperature beside a soil part on soil
    temperature shows a share above 0. The share itself is then no measure of the day:
    both fits are fitted to the same nights and nearly agree there, so the night's share
    is attenuated (on a known-truth trial with 18–43 % of the night Reco on air
    temperature it found 6–37 %) and the daytime part of their difference, where air
    and soil part most, is not identified by the nights (round trace31, DEVELOPERS.md).

    References
    ----------
    Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
    Hall (m).
    Andrews, D. W. K. (2000). Inconsistency of the bootstrap when a parameter is on the
    boundary of the parameter space. Econometrica 68, 399–405 (m).
    """
    draws = np.asarray(draws, dtype=float)
    return bool(draws.size) and float(share) - float(z) * float(np.std(draws)) > 0.0


def share_day_weight(weight: float, share: float) -> float:
    """The other temperature's weight in the daytime records' part, at least the share
    (``driver_day_prior = "share"``).

    Parameters
    ----------
    weight : float
        The daytime records' weight of ``driver_day_prior = "mixture"``
        (:func:`fluxpart.uncertainty.mixture_day_weight`, or the night weight where no
        mixture is shown) [1].
    share : float
        The night's mixture share s (:func:`mixture_share`) [1].

    Returns
    -------
    float
        max(`weight`, s) [1]: the daytime part of the temperature difference is then at
        least √s · |Σ_day Δ|.

    Notes
    -----
    On the night records the share is identified: the truth lies s of the way from the
    central fit to the other, an error s · Δ (the weight s², :func:`fluxpart.uncertainty.
    record_inputs`). How the part on the other temperature carries into the day is not
    identified by the nights (both fits agree there, :func:`mixture_shown`'s Notes):
    the day records take the stacking weight s as the probability of the other
    temperature's fit in a two-point predictive mixture (stacking weights as the weights
    of an average of predictive distributions, Yao et al. 2018 (m)), whose second moment
    about the central fit is s · (Σ_day Δ)², as a model weight's is
    (:func:`fluxpart.uncertainty.driver_weight`'s Notes). Under one temperature the
    share stays near 0 and so does the weight; on known-truth trials with 20–43 % of the
    night Reco on air temperature the share was attenuated to 0.0–0.4 and the nights'
    test showed only some of them (DEVELOPERS.md, round partbias).

    References
    ----------
    Yao, Y., Vehtari, A., Simpson, D. & Gelman, A. (2018). Using stacking to average
    Bayesian predictive distributions. Bayesian Analysis 13, 917–1007 (m).
    Breiman, L. (1996). Stacked regressions. Machine Learning 24, 49–64 (m).
    """
    return max(float(weight), float(share))


def unchanged_note(test: str, judged, used: bool) -> str:
    """Why a set ``mixture_test`` changed nothing in a run, or '' where it may have acted.

    A result records the setting (written only away from its default); without this
    note it could not tell that the setting changed nothing, as
    :func:`fluxpart.daytime_temperature.unchanged_note` tells of ``daytime_temperature``
    (round review97).

    Parameters
    ----------
    test : str
        The ``mixture_test`` setting, a key of :data:`TESTS`.
    judged : sequence of tuple
        (share, unclipped draws) of every mixture test the run made
        (:func:`mixture_shown`'s arguments): that of ``driver_day_prior = "mixture"`` or
        ``"share"`` and that of ``daytime_temperature = "mixture"``; empty: none made.
    used : bool
        Whether the settings ask for the test at all (``driver_day_prior`` ``"mixture"``
        or ``"share"``, or ``daytime_temperature = "mixture"``).

    Returns
    -------
    str
        A warning naming the setting and why it changed nothing: no setting asks for
        the test, no test was made (one temperature, or no fit on the other), or every
        test made gives the same verdict at the setting's critical value and at the
        default's (so every table equals that of the default test); '' for the default or
        where a verdict differs.

    References
    ----------
    Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
    Hall, ch. 13 (the bootstrap standard error of the share) (m).
    """
    if test == DEFAULT_TEST:
        return ""
    where = f'[processing] mixture_test = "{test}" changed nothing in this run'
    if not used:
        return (f"{where}: it sets the nights' test of a mixture of air and soil temperature "
                'for driver_day_prior = "mixture" or "share" and daytime_temperature = '
                '"mixture", and these settings ask for neither')
    if not judged:
        return (f"{where}: the nights' test of a mixture of air and soil temperature needs "
                "nighttime fits on both temperatures (for daytime_temperature = \"mixture\" "
                "a run on soil temperature), and this run made none (one temperature, or "
                "no fit on the other)")
    if any(mixture_shown(share, draws, TESTS[test]) != mixture_shown(share, draws,
                                                                      TESTS[DEFAULT_TEST])
           for share, draws in judged):
        return ""
    share, draws = judged[0]
    spread = float(np.std(np.asarray(draws, dtype=float))) if len(draws) else float("nan")
    above = f"{share / spread:.2f} standard errors above 0" if spread > 0 else "no spread"
    return (f"{where}: the nights' share of the other temperature, {share:.2f} "
            f"(standard error {spread:.2f} over resampled nights, {above}), is judged "
            f"alike at the critical value {TESTS[test]:.3f} and at the default's "
            f"{TESTS[DEFAULT_TEST]:.3f}, so every table equals that of mixture_test = "
            f'"{DEFAULT_TEST}"')
