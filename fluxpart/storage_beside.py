"""An unmapped column holding the flux mapped as ``nee`` plus a storage term's course.

A file often holds both the turbulent CO2 flux at the sensor and NEE, that flux plus the
change of the CO2 stored below it (the storage term). Mapping the turbulent flux as
``nee`` while the storage-corrected column sits unread beside it leaves the storage out:
the CO2 held below the sensor on calm nights is missing from the night records and
comes back in the morning's, which the u* filter keeps (nighttime Reco low, NEE high).
The column names need not say which is which, so the values decide: the difference of
the unread column and the mapped one is the storage term where the unread column is NEE,
and the storage term has a sign fixed by the physics of the night: CO2 accumulates
below the sensor in the stable night (positive) and is vented as the morning's
turbulence mixes the canopy air up (negative), about zero over whole days (Finnigan
2006). The reverse mapping (NEE mapped, the turbulent flux unread) gives the opposite
signs and is not named. The store is empty once the morning has vented it, so the
difference through the rest of the day must be nearer 0 than the morning's: the same
flux before its density (WPL) correction, or from an open-path analyser whose body heats
by day and cools by night, differs by a term that follows the sensible heat (negative by
night, largest at midday) and is not named (review93).

References
----------
Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and Forest
Meteorology 136, 108–113. doi:10.1016/j.agrformet.2004.12.010
Aubinet, M., Vesala, T. & Papale, D. (eds.) (2012). Eddy Covariance: A Practical Guide to
Measurement and Data Analysis. Springer, ch. 1 (NEE = turbulent flux + storage) (m).
Webb, E. K., Pearman, G. I. & Leuning, R. (1980). Correction of flux measurements for
density effects due to heat and water vapour transfer. Quarterly Journal of the Royal
Meteorological Society 106, 85–100 (the density term proportional to H and E) (m).
Burba, G. G., McDermitt, D. K., Grelle, A., Anderson, D. J. & Xu, L. (2008). Addressing
the influence of instrument surface heat exchange on the measurements of CO2 flux from
open-path gas analyzers. Global Change Biology 14, 1854–1876 (m).
"""

from __future__ import annotations

import numpy as np

__all__ = ["SAME_FLUX_CORRELATION", "SLOPE_RANGE", "MIN_NIGHTS", "NIGHT_Z", "MORNING_Z",
           "MIN_NIGHT_SHARE", "same_flux", "storage_corrected_beside"]

#: The unread column follows the mapped flux this closely (Pearson r over the records
#: both hold) to be the same flux at all: the storage term is a small part of the
#: variance of a half-hourly CO2 flux, whose daytime uptake dominates it (our choice,
#: not fitted to any probe: 81 % of the variance shared).
SAME_FLUX_CORRELATION = 0.9
#: ... with a least-squares slope within this range: the same unit (mg CO2 against µmol
#: is a factor of 0.044, g C against g CO2 0.27, mmol against µmol 1000; a storage term of
#: a few per cent changes the slope little). Symmetric in ratio (1/1.25 = 0.8), it admits
#: no unit factor of the trade (argued from the units, not fitted).
SLOPE_RANGE = (0.8, 1.25)
#: Nights (and their mornings) the difference must be judged on: a month of them (our
#: choice: the standard errors below rest on that many independent nights; the files of
#: a series are judged joined, so a file a day or a month is judged too).
MIN_NIGHTS = 30
#: The nights' mean difference above 0 by this many standard errors (one-sided p below
#: 3e-7: a column differing by noise alone is not named across thousands of files) ...
NIGHT_Z = 5.0
#: ... and the mornings' (the first 3 h after each night) below 0 by this many: the vent
#: of the night's store; a constant offset or a second analyser's bias has one sign all
#: day and is not named. A confirming test after the nights' (one-sided p 1.3e-3, joint
#: with the nights' far below it), so the usual 3 standard errors (our choice).
MORNING_Z = 3.0
#: The nights' mean difference at least this share of the median magnitude of the
#: mapped night flux: a store too small to move a budget is not named (our choice, not
#: fitted to any probe).
MIN_NIGHT_SHARE = 0.05
#: Hours after the end of a night that count as its morning (the vent of the store takes
#: the first hours of daytime mixing; common practice (m)), as
#: :data:`fluxpart.storage_check.MORNING_HOURS`.
MORNING_HOURS = 3.0
#: A record is night where its Rg (or PPFD) lies below this share of the record's 99th
#: percentile of it, so any unit of light serves: about 10 W m-2 in W m-2.
DARK_SHARE = 0.01


def same_flux(nee, other) -> bool:
    """True where `other` reads as the same CO2 flux as `nee` in the same unit.

    Parameters
    ----------
    nee, other : array_like
        The mapped flux and an unread column, record by record (any one unit).

    Returns
    -------
    bool
        Correlation at least :data:`SAME_FLUX_CORRELATION` and a least-squares slope of
        `other` on `nee` within :data:`SLOPE_RANGE`, over 100 common records or more.
    """
    nee, other = np.asarray(nee, dtype=float), np.asarray(other, dtype=float)
    both = np.isfinite(nee) & np.isfinite(other)
    if both.sum() < 100:
        return False
    x, y = nee[both] - nee[both].mean(), other[both] - other[both].mean()
    spread = float(np.sqrt((x * x).sum() * (y * y).sum()))
    if spread <= 0:
        return False
    r = float((x * y).sum()) / spread
    slope = float((x * y).sum() / (x * x).sum())
    return r >= SAME_FLUX_CORRELATION and SLOPE_RANGE[0] <= slope <= SLOPE_RANGE[1]


def _night_morning_and_day_means(difference, dark, per_morning: int):
    """Mean difference of each night (a run of dark records), of its morning and of the
    rest of its daylight (from the morning's end to the next night)."""
    edges = np.flatnonzero(np.diff(dark.astype(np.int8)))
    starts = np.r_[0, edges + 1]
    ends = np.r_[edges + 1, dark.size]
    nights, mornings, days = [], [], []
    for number, (start, end) in enumerate(zip(starts, ends, strict=True)):
        if not dark[start] or end >= dark.size:
            continue
        night = difference[start:end]
        morning = difference[end:end + per_morning]
        morning = morning[np.isfinite(morning)]
        night = night[np.isfinite(night)]
        if night.size >= 2 and morning.size >= 2:
            nights.append(night.mean())
            mornings.append(morning.mean())
            # the daylight run after this night ends where the next night starts
            light_end = ends[number + 1] if number + 1 < ends.size else dark.size
            day = difference[end + per_morning:light_end]
            day = day[np.isfinite(day)]
            days.append(day.mean() if day.size else np.nan)
    return np.asarray(nights), np.asarray(mornings), np.asarray(days)


def storage_corrected_beside(nee, light, others: dict, interval_minutes: float,
                             nee_column: str) -> str | None:
    """A warning where an unread column is the mapped flux plus a storage term.

    Parameters
    ----------
    nee : array_like
        The column mapped as ``nee``, as read (the file's unit), records in time order.
    light : array_like
        Rg or PPFD of the same records (any unit): its dark records are the nights.
    others : dict
        Unread numeric columns of the file: name to values of the same records.
    interval_minutes : float
        Record length [min].
    nee_column : str
        The file's name of the column mapped as ``nee`` (for the message).

    Returns
    -------
    str or None
        The message naming the first column that reads as :func:`same_flux` and whose
        difference from `nee` is positive through the nights (z ≥ :data:`NIGHT_Z`, mean
        at least :data:`MIN_NIGHT_SHARE` of the median night flux) and negative in the
        mornings after them (z ≤ -:data:`MORNING_Z`), over :data:`MIN_NIGHTS` nights,
        and whose mean through the rest of the days (after the mornings) is nearer 0
        than the mornings'.

    Notes
    -----
    NEE = turbulent flux + storage term (Finnigan 2006). With `other` the NEE and `nee`
    the turbulent flux, ``other - nee`` is the storage term: positive while CO2 pools
    below the sensor at night, negative as the morning vents it.
    """
    nee = np.asarray(nee, dtype=float)
    light = np.asarray(light, dtype=float)
    if not np.isfinite(light).any() or interval_minutes <= 0:
        return None
    bright = np.nanpercentile(light, 99)
    if not bright > 0:
        return None
    dark = np.where(np.isfinite(light), light <= DARK_SHARE * bright, False)
    night_flux = np.nanmedian(np.abs(nee[dark])) if dark.any() else np.nan
    per_morning = max(1, int(round(MORNING_HOURS * 60 / interval_minutes)))
    for column, values in others.items():
        values = np.asarray(values, dtype=float)
        if not same_flux(nee, values):
            continue
        nights, mornings, days = _night_morning_and_day_means(values - nee, dark,
                                                              per_morning)
        if nights.size < MIN_NIGHTS:
            continue
        night_mean, morning_mean = nights.mean(), mornings.mean()
        # the store is vented by the morning's mixing and stays about empty through the
        # rest of the day (Finnigan 2006): a difference as negative after the morning as
        # in it follows the sensible heat, largest at midday (an analyser's density or
        # self-heating term: Webb et al. 1980; Burba et al. 2008), not a store
        day_mean = np.nanmean(days) if np.isfinite(days).any() else 0.0
        if abs(day_mean) >= abs(morning_mean):
            continue
        night_se = nights.std(ddof=1) / np.sqrt(nights.size)
        morning_se = mornings.std(ddof=1) / np.sqrt(mornings.size)
        if not (night_se > 0 and morning_se > 0 and np.isfinite(night_flux)):
            continue
        if (night_mean / night_se >= NIGHT_Z and morning_mean / morning_se <= -MORNING_Z
                and night_mean >= MIN_NIGHT_SHARE * night_flux):
            return (f"the unread column {column!r} holds the flux mapped as nee "
                    f"({nee_column!r}) plus a term that is positive through the nights "
                    f"(mean {night_mean:+.3g} in the file's unit, {night_mean / night_se:.0f} "
                    "standard errors, "
                    f"over {nights.size} nights) and negative in the {MORNING_HOURS:g} h "
                    f"after them (mean {morning_mean:+.3g}): the course of the CO2 stored "
                    "below the sensor, pooled on calm nights and vented in the morning, so "
                    f"{column!r} reads as NEE with the storage term and {nee_column!r} as "
                    "the turbulent flux without it, which leaves the store out of the "
                    "night and morning records the partitionings read; map "
                    f"[input.columns] nee = {column!r} (or map the file's storage column "
                    "as storage)")
    return None
