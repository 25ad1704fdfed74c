"""Night NEE already filtered by a u* threshold before it was read (round mistakes42).

An eddy-covariance system computes a flux in calm air as in windy air: the quality tests
reject more records at low friction velocity u* (poor development of turbulence, the
stationarity test), but they do not remove every one of them, and they remove records by
day and at high u* too. A flux column from which every night record below one u* is
missing has been filtered by a u* threshold already: an earlier program's u* filter, or
a quality flag that includes the u* test mapped as ``nee_flag``. That passes every check,
and the run then filters it a second time. The detector sees no calm nights, so it
cannot find the threshold they show, the bootstrap that carries the u* uncertainty has no
records below it to vary, and a threshold set higher than the site's removes nights both
partitionings need. On the invented grassland example, night NEE removed below
u* = 0.25 m s-1 (the detected threshold is 0.156) moved nighttime Reco by +39.8 and GPP
by +34.7 g C m-2 and shrank NEE's stated 1-sigma from 9.2 to 7.5 g C m-2; below 0.3 it
moved daytime GPP by -17.3 and Reco by -22.1, below 0.4 nighttime Reco by -49.4 (its
1-sigma 21.3), all without a word.

:func:`nee_filtered_by_ustar` names such a column: sorted by u*, the lowest night records
hold (nearly) no measured NEE over a run long enough that chance cannot explain it,
while the nights above hold NEE in a share many times larger.

References
----------
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571-583. doi:10.5194/bg-3-571-2006

Foken, T. et al. (2004). Post-field data quality control. In: Lee, X., Massman, W., Law,
B. (eds), Handbook of Micrometeorology, Kluwer, 181-208 (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["MAX_SHARE_BELOW", "MIN_RECORDS_BELOW", "STAGE", "nee_filtered_by_ustar"]

#: The stage named in the preflight finding.
STAGE = "input (nee u* filtered)"

#: Largest share of the night records below the cut that may hold measured NEE for the
#: column to read as filtered there [1]. Our choice: a filter applied on another night
#: mask than the run's (a twilight record the earlier program counted as day) leaves a
#: few records below its threshold; an unfiltered tower keeps a fifth or more of its
#: calmest night records (the quality tests of Foken et al. 2004 (m) reject most, not
#: all of them; the calmest 5 % of the night records of 68 generated site-years hold
#: NEE in 26-59 %, ``bench_prefilter_vpd_zero.py``).
MAX_SHARE_BELOW = 0.05

#: Fewest night records (with u*) below the cut, and their least share of all such
#: night records, for the column to be named [1]. Where a share p of the nights above
#: hold NEE, 100 records below without one have a chance of (1 - p)^100 under the same
#: rate: below 1e-4 for p = 0.1. The share keeps a long record's few calmest nights, all
#: rejected by the quality tests, from deciding (our choice: 5 %).
MIN_RECORDS_BELOW = 100
_MIN_SHARE_OF_NIGHTS = 0.05

#: Least share of the night records above the cut that hold measured NEE, and least
#: ratio of that share to the share below [1] (our choice: a record with most nights
#: missing at every u* tells nothing about a filter).
_MIN_SHARE_ABOVE = 0.2
_MIN_RATIO = 10.0


def nee_filtered_by_ustar(nee, ustar, is_night, names=None, index=None) -> str | None:
    """A message where night NEE is missing below one u*, as a u* filter leaves it, or None.

    Parameters
    ----------
    nee : array_like
        Measured NEE of each record [µmol m-2 s-1], NaN where missing or rejected by the
        site flag (the screened record, before the run's own u* filter).
    ustar : array_like
        Friction velocity of the same records [m s-1], NaN where missing.
    is_night : array_like of bool
        The run's night mask.
    names : dict, optional
        Canonical name -> file column, to name the columns in the message.
    index : pandas.DatetimeIndex, optional
        The records' stamps: records inside a run of missing NEE of a day or more (an
        outage) are left out, and where the whole record is not named, each calendar
        year is judged alone (a year of another program's export joined to the record).

    Returns
    -------
    str or None
        The warning text, or None where the records below the split of the largest
        contrast hold NEE in more than :data:`MAX_SHARE_BELOW` of them, or too few lie
        below it (see Notes).

    Notes
    -----
    The night records with u* above 0 (a u* of 0 or less is a code for missing, not a
    measurement) are sorted by u*. The cut splits them where the share of
    measured NEE above it exceeds the share below it by the most standard errors (the
    two-proportion z statistic, Fleiss et al. 2003 (m); the k calmest records below); it is
    named where the share below is at most :data:`MAX_SHARE_BELOW`, k reaches
    :data:`MIN_RECORDS_BELOW` and 5 % of the night records, and the records above hold
    NEE in a fifth or more and ten times the share below. The moving
    point test (Papale et al. 2006) then finds its threshold only among the nights left,
    so the u* threshold the tables give is the earlier filter's or above it, and its
    bootstrap spread is too narrow.

    References
    ----------
    Papale, D. et al. (2006). Biogeosciences 3, 571-583. doi:10.5194/bg-3-571-2006

    Fleiss, J. L., Levin, B., & Paik, M. C. (2003). Statistical Methods for Rates and
    Proportions, 3rd ed. Wiley (m)
    """
    nee = np.asarray(nee, dtype=float)
    ustar = np.asarray(ustar, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    if not nee.shape == ustar.shape == night.shape:
        return None
    if index is not None and len(index) == nee.size:
        # records of an outage (NEE missing a day or more on end, by day too) are no
        # filter's: a winter without the analyser holds the calm nights of an inversion
        night = night & ~_outage(np.isnan(nee), pd.DatetimeIndex(index))
    split = _split(nee, ustar, night)
    where = ""
    if split is None and index is not None and len(index) == nee.size:
        years = pd.DatetimeIndex(index).year.to_numpy()
        for year in np.unique(years):
            split = _split(nee, ustar, night & (years == year))
            if split is not None:
                where = f" in {year}"
                break
    if split is None:
        return None
    cut, below, missing, share_of_nights, share_above = split
    names = names or {}
    flux = names.get("nee", "nee")
    flag = names.get("nee_flag")
    flag_text = (f", or the flag {flag!r} includes the u* test" if flag
                 else "")
    return (f"nee (column {flux!r}) is missing in {missing} of the {below} "
            f"night records{where} with u* (column {names.get('ustar', 'ustar')!r}) below "
            f"{cut:.3g} m s-1 ({100 * share_of_nights:.0f} % of the night records with u*) "
            f"and measured in {100 * share_above:.0f} % of those above: the flux looks "
            f"filtered by a u* threshold already (an earlier program's u* filter{flag_text}), "
            "where a tower's quality tests reject many calm night records but never all of "
            "them. The run filters the nights again: its u* detector cannot see the "
            "threshold of the calm nights removed, the u* uncertainty misses them, and a "
            "threshold above the site's removes nights both partitionings need. Read the "
            "flux before any u* filter (and a flag without the u* test)")


def _outage(missing, index):
    """Records inside a run of missing NEE lasting a day or more (an outage)."""
    if missing.size < 2:
        return np.zeros(missing.size, dtype=bool)
    step = (index[1:] - index[:-1]).median() / pd.Timedelta(days=1)    # days
    per_day = max(int(round(1.0 / step)), 1) if step > 0 else missing.size
    edges = np.diff(np.concatenate([[0], missing.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    long = (ends - starts) >= per_day
    covered = np.zeros(missing.size + 1, dtype=np.int64)
    np.add.at(covered, starts[long], 1)
    np.add.at(covered, ends[long], -1)
    return np.cumsum(covered[:-1]) > 0


def _split(nee, ustar, night):
    """The split of `night` records by u* the rule names, as (cut [m s-1], records below,
    of them without NEE, their share of the night records, share measured above), or
    None."""
    with np.errstate(invalid="ignore"):
        # u* is the fourth root of a sum of squared covariances, above 0 in any measured
        # record: 0 is a logger's code for missing, written where the sonic (and so the
        # flux) was lost, which otherwise read as a filter at the lowest u* measured
        night = night & np.isfinite(ustar) & (ustar > 0.0)
    if night.sum() < MIN_RECORDS_BELOW * 2:
        return None
    order = np.argsort(ustar[night], kind="stable")
    sorted_ustar = ustar[night][order]
    present = np.isfinite(nee[night])[order]
    total = present.size
    count = np.arange(1, total)               # the k calmest records, k < total
    measured = np.cumsum(present)
    below = measured[:-1] / count
    above = (measured[-1] - measured[:-1]) / (total - count)
    # the split of the largest contrast: the two-proportion z statistic (pooled share;
    # e.g. Fleiss et al. 2003 (m)), which a few records at either end cannot maximise
    pooled = measured[-1] / total
    spread = np.sqrt(max(pooled * (1.0 - pooled), 1e-12) * (1.0 / count + 1.0 / (total - count)))
    k = int(np.argmax((above - below) / spread)) + 1
    share_below, share_above = below[k - 1], above[k - 1]
    if (share_below > MAX_SHARE_BELOW
            or k < max(MIN_RECORDS_BELOW, _MIN_SHARE_OF_NIGHTS * total)
            or share_above < max(_MIN_SHARE_ABOVE, _MIN_RATIO * share_below)):
        return None
    cut = sorted_ustar[k] if sorted_ustar[k] > sorted_ustar[k - 1] else sorted_ustar[k - 1]
    return float(cut), k, k - int(measured[k - 1]), k / total, float(share_above)
