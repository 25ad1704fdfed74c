"""NEE measured where u* is missing: a u* column of another record (round mistakes47).

The CO2 flux and the friction velocity u* are computed from one sonic anemometer's wind
record: the flux is the covariance of the vertical wind w with the CO2 density, u* the
square root of the covariances of w with the horizontal wind (Aubinet et al. 2012,
ch. 1 and 2 (m)). A record the sonic lost (a power cut, icing, rain on the transducers,
a logger restart) has neither, so a tower's u* is missing where its NEE is missing too;
NEE is lost more often than u* (its own quality tests, the gas analyser's faults), never
the reverse. A u* column joined from another record (another year's file, a neighbouring
tower, a station's sonic joined by date) keeps that record's gaps instead, and NEE is
then present in those records as often as anywhere. Every range check passes, yet the
u* filter sorts this tower's nights by another record's turbulence: on the invented
grassland example, another year's u* joined by date moved annual NEE by -35.9
(-3.9 sigma) and nighttime Reco by -112.8 g C m-2 (-5.3 sigma) without a word.

References
----------
Aubinet, M., Vesala, T., & Papale, D. (Eds.) (2012). Eddy Covariance: A Practical Guide
to Measurement and Data Analysis. Springer (m)

Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571-583. doi:10.5194/bg-3-571-2006
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .gap_sides import gap_runs, run_ids

__all__ = ["MIN_RUN_DAYS", "PRESENT_RATIO", "STAGE", "nee_without_ustar"]

#: The stage named in the preflight finding.
STAGE = "input (ustar of another record)"

#: Shortest run of missing u* judged [days]. Our choice: a sonic lost for a day or more
#: (a power cut, icing, a logger fault) loses the flux with it, whereas single records
#: of u* removed by a later despiking script leave the flux (some trials' towers so
#: written); a u* the weather station's logger writes shares that logger's gaps, so
#: records with a driver missing are not counted.
MIN_RUN_DAYS = 1.0
#: Share of NEE present in those runs, relative to its share where u* is present, at and
#: above which the runs are another record's [1]. Our choice: a tower's own runs hold
#: (nearly) no NEE, 0 on the examples and generated sets; another record's hold NEE
#: about as often as any record (a ratio near 1); half lies far from both.
PRESENT_RATIO = 0.5


def _long_runs(lost, min_records):
    """Label of each record's run of ``lost`` at least ``min_records`` long (1, 2, ...;
    0 outside such runs)."""
    # entry 0 stands for the records outside every run (run_ids -1)
    long = np.r_[False, gap_runs(lost)[1] >= min_records]
    place = run_ids(lost) + 1
    return np.where(long[place], np.cumsum(long)[place], 0)


def _judged(labels, measured, share_with, per_day):
    """Mask of the records in runs whose NEE and weather are present as where u* is.

    Each run is judged alone (leftovers51: pooled, three days of another record's u*
    beside a longer sonic loss without NEE were diluted below the ratio), then all of
    them together (many short runs, each under half a day's worth of NEE).
    """
    runs = labels > 0
    counts = np.bincount(labels, minlength=1)
    present = np.bincount(labels, weights=measured, minlength=len(counts))
    alone = (present >= per_day / 2) & (present >= PRESENT_RATIO * share_with * counts)
    alone[0] = False
    if alone.any():
        return alone[labels]
    pooled = int((measured & runs).sum())
    if pooled >= per_day / 2 and pooled >= PRESENT_RATIO * share_with * int(runs.sum()):
        return runs
    return np.zeros(len(labels), dtype=bool)


def nee_without_ustar(nee, ustar, index, interval_minutes=30.0, names=None,
                      drivers=()) -> str | None:
    """A message naming a u* column missing for days in which NEE was measured, or None.

    Parameters
    ----------
    nee : array_like
        NEE as read, before screening (NaN where missing) [µmol m-2 s-1].
    ustar : array_like
        u* as read, before screening (NaN where missing; 0, a logger's code for a lost
        sonic, counts as missing) [m s-1].
    index : pandas.DatetimeIndex
        The records' stamps (a regular record), to name the days.
    interval_minutes : float, optional
        Record interval [min].
    names : dict, optional
        Canonical name -> file column, to name the columns.
    drivers : sequence of array_like, optional
        The weather columns as read (Rg, air temperature, ...): a record where one is
        missing may be the weather logger's gap, where that logger writes u* (some
        towers do), and is not counted.

    Returns
    -------
    str or None
        Named where, in a run of missing u* of :data:`MIN_RUN_DAYS` or longer, NEE and
        every driver are present in half a day's worth of records or more, and there in
        :data:`PRESENT_RATIO` or more of its share in the records with u*; or, where no
        run does alone, in all such runs together.

    Notes
    -----
    Each run is judged alone first (leftovers51): pooled, a sonic's own day-long losses
    (no NEE) counted against the runs where NEE was measured, so three days of u*
    removed beside the grassland example's 5.4-day sonic loss were not named (review59;
    2 to 4 days removed at 17 places of each example: named in 1 and 0 of 51 pooled, 51
    and 51 of 51 alone). The runs together still name many short runs, each with under
    half a day's worth of NEE. The tower's own u* removed alone for days by a check the
    flux did not share reads as another record's; the message names both causes, as the
    values cannot tell them apart, and the runs of a sonic's own loss beside them.

    References
    ----------
    Aubinet, M., Vesala, T., & Papale, D. (Eds.) (2012). Eddy Covariance: A Practical
    Guide to Measurement and Data Analysis. Springer, ch. 1-2 (m): the flux and u* from
    one sonic's wind record.
    """
    nee = np.asarray(nee, dtype=float)
    ustar = np.asarray(ustar, dtype=float)
    with np.errstate(invalid="ignore"):
        lost = ~(ustar > 0.0)
    per_day = 1440.0 / float(interval_minutes)
    labels = _long_runs(lost, int(np.ceil(MIN_RUN_DAYS * per_day)))
    measured = np.isfinite(nee)
    for values in drivers:
        measured &= np.isfinite(np.asarray(values, dtype=float))
    if not labels.any() or lost.all():
        return None
    share_with = float(measured[~lost].mean())
    if share_with == 0.0:
        return None
    runs = _judged(labels, measured, share_with, per_day)
    if not runs.any():
        return None
    without = int((measured & runs).sum())
    share_without = without / int(runs.sum())
    names = names or {}
    days = pd.DatetimeIndex(index)[runs & measured]
    # the runs' length and the part of them with NEE apart: "5.1 days' worth" of a week
    # removed read as the u* missing (review59)
    rest = int((labels > 0).sum()) - int(runs.sum())
    other = (f" (besides {rest / per_day:.1f} days' worth of runs with NEE as rarely present "
             "as a sonic's own loss leaves it)" if rest else "")
    return (f"u* (column {names.get('ustar', 'ustar')!r}) is missing for a day or more at a "
            f"time in {int(runs.sum()) / per_day:.1f} days' worth of records{other}, in which NEE "
            f"(column {names.get('nee', 'nee')!r}) and the weather are present in "
            f"{100 * share_without:.0f} % ({without / per_day:.1f} days' worth, "
            f"{days[0]:%Y-%m-%d} .. {days[-1]:%Y-%m-%d}), against "
            f"{100 * share_with:.0f} % where u* is present: the flux and u* come from one "
            "sonic anemometer, so a sonic lost for a day loses both. Either the u* column is "
            "another record's (another year's file, another tower or station joined by "
            "date), by which the u* filter would sort this tower's nights: map the tower's "
            "own u*; or the tower's own u* was removed there by a check that kept the flux "
            "(a sonic's flag applied to u* alone): then those nights are rejected and "
            "filled as any without u*, and the flux's own checks there deserve a look")
