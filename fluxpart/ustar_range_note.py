"""A clause where a u* threshold lies outside its own bootstrap range (round polish48).

The applied u* threshold and its bootstrap draws are one estimator: a draw runs the same
detector on a resample of the night records, and a draw that picks every record once
returns the applied threshold (`tests/test_ustar.py`). The draws still read a little low
(a median 1.8 % below the applied threshold on 168 generated site-years): a resample's
u* class means scatter by the data's error and the resample's, so the moving point test
finds a class below the threshold that reaches the plateau more often. A threshold can
thus lie above its bootstrap 5-95 % range (4 of 168 generated site-years; the report
showed 0.181 m s-1 against 0.154-0.178 without a word). Where the report or ``check``
prints a threshold beside its range and it lies outside, this clause says so and why.

References
----------
Efron, B., & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
Hall (m): a bootstrap replication is the same statistic computed on the resample.

Papale, D., et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571-583 (m): the u* threshold's bootstrap.
"""
from __future__ import annotations

import math

__all__ = ["outside_range_clause"]


def outside_range_clause(threshold, low, high, decimals: int = 3) -> str:
    """A short clause where a threshold lies outside its bootstrap range, or ''.

    Parameters
    ----------
    threshold : float
        The applied u* threshold [m s-1].
    low, high : float
        Its bootstrap 5th and 95th percentiles [m s-1].
    decimals : int, optional
        The decimals the three are printed with: a threshold equal to an end of the
        range at that precision is inside it as the reader sees it.

    Returns
    -------
    str
        ``"above its bootstrap range, ..."`` with the reason (the draws are the same
        detector on resamples, whose noisier u* class means let it stop at a lower
        class, so they read about 2 % low), or ``"below ..."`` (the noisier class
        means scatter the draws); '' where the threshold lies within the range at the
        printed precision or any of the three is missing.
    """
    values = [threshold, low, high]
    try:
        values = [round(float(v), decimals) for v in values]
    except (TypeError, ValueError):
        return ""
    if not all(math.isfinite(v) for v in values):
        return ""
    threshold, low, high = values
    if low <= threshold <= high:
        return ""
    same = ("each draw runs the same detector on a resample of the night records, whose "
            "u* class means are noisier")
    if threshold > high:
        return (f"above its bootstrap range, as can happen: {same} and let it stop at a "
                "lower class, so the draws read about 2 % low")
    return f"below its bootstrap range, as can happen: {same} and scatter the draws"
