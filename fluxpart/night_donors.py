"""Night records kept as measurements but not used as donors for night gaps.

A night record whose u* lies just above the u* threshold is kept: it is measured, it is
in every sum and table as measured. But the threshold is an estimate with a spread, and a
record within one standard deviation of it may still carry part of the flux loss the u*
filter is meant to remove. A donor copies its value into every gap it fills, so its loss
would be copied into many night gaps. With ``night_donor_margin = "threshold_spread"``
(the default) such records give no night gap their NEE: :func:`threshold_spread` is the
threshold's 1-sigma from its bootstrap percentiles, :func:`withheld_donors` marks the
night records between a run's threshold t and t + σ, :func:`donor_values` hides them from
the fill and :func:`as_measured` labels them measured again in the fill's table.

References
----------
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique. Biogeosciences 3, 571-583 (the bootstrap of the
u* threshold).
Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439
(Appendix A: marginal distribution sampling, the donors of a gap).
"""

from __future__ import annotations

from statistics import NormalDist

import numpy as np
import pandas as pd

from . import screening

#: The scenario runs' names: ``ustar_p`` and the bootstrap percentile.
_SCENARIO_PREFIX = "ustar_p"


def threshold_spread(runs, margin="threshold_spread") -> np.ndarray | None:
    """One standard deviation of the u* threshold per record, from its bootstrap percentiles.

    Parameters
    ----------
    runs : dict of str to numpy.ndarray
        Each u* run's threshold per record [m s-1]; the bootstrap scenarios are named
        ``ustar_pXX`` (XX the percentile), as :func:`fluxpart.ustar_stage.record_runs`
        names them.
    margin : str
        ``Config.night_donor_margin``: ``"threshold_spread"`` or ``"none"``.

    Returns
    -------
    numpy.ndarray or None
        ``|t_high − t_low| / (z_high − z_low)`` [m s-1] over the lowest and highest
        scenario percentiles (z their standard-normal quantiles): half the 16–84 range
        for the default 16/50/84 (0 where either is missing). None with ``"none"`` or
        fewer than two scenario percentiles (a fixed threshold, no bootstrap): then no
        record is withheld.

    References
    ----------
    Papale, D. et al. (2006), see the module (the threshold's bootstrap percentiles).
    """
    if margin == "none":
        return None
    percentiles = {name: int(name[len(_SCENARIO_PREFIX):]) for name in runs
                   if name.startswith(_SCENARIO_PREFIX) and name[len(_SCENARIO_PREFIX):].isdigit()}
    if len(percentiles) < 2:
        return None
    low = min(percentiles, key=percentiles.get)
    high = max(percentiles, key=percentiles.get)
    normal = NormalDist()
    span = normal.inv_cdf(percentiles[high] / 100) - normal.inv_cdf(percentiles[low] / 100)
    spread = np.abs(np.asarray(runs[high], dtype=float) - np.asarray(runs[low], dtype=float))
    return np.nan_to_num(spread / span)


def withheld_donors(nee_measured, ustar, is_night, threshold, spread) -> np.ndarray:
    """Night records kept by the u* filter at `threshold` but within `spread` above it.

    Parameters
    ----------
    nee_measured : array_like
        NEE after screening and the u* filter [µmol m-2 s-1], NaN where rejected or
        missing (a missing record is a gap, never a donor, whatever its u*).
    ustar : array_like
        Friction velocity [m s-1]; NaN where missing.
    is_night : array_like of bool
        The night mask.
    threshold : numpy.ndarray
        The run's u* threshold per record [m s-1].
    spread : numpy.ndarray or None
        :func:`threshold_spread` [m s-1]; None withholds none.

    Returns
    -------
    numpy.ndarray of bool
        True for night records with NEE measured and ``threshold <= u* < threshold +
        spread``: measured, but no donor for a night gap. Day records are never withheld.

    References
    ----------
    Papale, D. et al. (2006), see the module.
    """
    ustar = np.asarray(ustar, dtype=float)
    if spread is None:
        return np.zeros(ustar.size, dtype=bool)
    near = screening.low_ustar(ustar, is_night, np.asarray(threshold) + spread)
    return near & ~screening.low_ustar(ustar, is_night, threshold) & np.isfinite(
        np.asarray(nee_measured, dtype=float))


def donor_values(nee_measured, withheld) -> np.ndarray:
    """The NEE a fill may draw on: the measured NEE, the withheld records hidden.

    Parameters
    ----------
    nee_measured : array_like
        NEE after the u* filter [µmol m-2 s-1], NaN where rejected or missing.
    withheld : array_like of bool or None
        :func:`withheld_donors`; None hides none.

    Returns
    -------
    numpy.ndarray
        `nee_measured` [µmol m-2 s-1], NaN at the withheld records.

    References
    ----------
    Reichstein, M. et al. (2005), see the module.
    """
    nee = np.asarray(nee_measured, dtype=float)
    if withheld is None or not np.any(withheld):
        return nee
    return np.where(withheld, np.nan, nee)


def as_measured(filled, nee_measured, withheld) -> pd.DataFrame:
    """The fill's table with the withheld records labelled measured, with their own NEE.

    Parameters
    ----------
    filled : pandas.DataFrame
        :func:`fluxpart.gapfill.fill_marginal`'s table of a fill that did not fill the
        withheld records (``gaps`` the missing records only).
    nee_measured : numpy.ndarray
        NEE after the u* filter [µmol m-2 s-1].
    withheld : numpy.ndarray of bool
        :func:`withheld_donors`.

    Returns
    -------
    pandas.DataFrame
        `filled` (itself where none is withheld) with ``value`` the measured NEE,
        ``method`` and ``quality`` 0, ``window_days`` 0, ``count`` 0 and ``std`` NaN at
        the withheld records, as :func:`fluxpart.gapfill.fill_marginal` labels a
        measured record.

    References
    ----------
    Reichstein, M. et al. (2005), see the module.
    """
    if not np.any(withheld):
        return filled
    out = filled.copy()
    for column, measured in (("value", nee_measured), ("method", 0), ("window_days", 0.0),
                             ("count", 0), ("std", np.nan), ("quality", 0)):
        out[column] = np.where(withheld, measured,
                               out[column].to_numpy()).astype(out[column].dtype)
    return out
