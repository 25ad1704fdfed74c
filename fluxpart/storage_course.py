"""Night NEE that follows the storage column's course: the store counted twice (round mistakes55).

NEE is the turbulent flux at the sensor plus the change of the CO2 stored below it,
NEE = F_c + S (Finnigan 2006). At night NEE is the ecosystem's respiration, set by
temperature and by what changes over weeks (biomass, soil water); how the released CO2
splits between the store and the flux through the sensor does not change it. So, within a
month and at the same air and soil temperature, NEE does not rise with the storage term:
the slope of night NEE on S is about 0 where the columns are mapped as they are (below 0
where calm nights lose CO2 by drainage, Aubinet 2008), and about +1 where the column
mapped as the turbulent flux already holds the store (a file's NEE, or a flux written
with its storage added) and the storage column is added again. The slope is named where
it stands :data:`MIN_Z` standard errors above :data:`MIDWAY` (midway between the two).

The slope reads NEE's course through the night against the store's, so any course of
respiration itself that the temperature terms do not carry (more respiration early in
the night from the day's photosynthate, Tang et al. 2005 (m)) passes into it, divided by
the store's course: a store whose course at equal temperature is small beside night NEE
(a short canopy's) made a NEE formed once read as a slope of +1 to +2. The slope is
judged only where that course is at least :data:`MIN_COURSE_SHARE` of night NEE (review76).

:func:`fluxpart.column_faults.storage_in_turbulent_flux` reads the same mistake from the
night-to-night trade between flux and store (hour-of-day anomalies); a store that repeats
the same daily course every night (a store modelled, or one changing little between
nights) gives it nothing to read, while the night's own course against temperature does.

References
----------
Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and Forest
Meteorology 136, 108-113 (NEE = turbulent flux + storage change).

Aubinet, M. (2008). Eddy covariance CO2 flux measurements in nocturnal conditions: an
analysis of the problem. Ecological Applications 18, 1368-1378 (night flux lost to
drainage and advection on calm nights).

Lloyd, J., & Taylor, J. A. (1994). Functional Ecology 8, 315-323 (respiration a function
of temperature).

Tang, J., Baldocchi, D. D., & Xu, L. (2005). Tree photosynthesis modulates soil
respiration on a diurnal time scale. Global Change Biology 11, 1298-1304 (m).

Cameron, A. C., & Miller, D. L. (2015). A practitioner's guide to cluster-robust
inference. Journal of Human Resources 50, 317-372 (standard errors clustered by night) (m).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["MIDWAY", "MIN_COURSE_SHARE", "MIN_COURSE_T", "MIN_NIGHTS", "MIN_Z",
           "night_nee_follows_storage", "storage_slope"]

#: Midway between a NEE formed once (slope 0) and one holding the store twice (+1).
MIDWAY = 0.5
#: Standard errors the slope must stand above :data:`MIDWAY` (as the turbulent flux's
#: storage slope of :mod:`fluxpart.column_faults`).
MIN_Z = 3.0
#: Nights holding night NEE, storage and temperature needed to judge (our choice: two
#: months of nights).
MIN_NIGHTS = 60
#: t statistic the store's course must reach as an instrument of the storage term (the
#: first stage); Stock and Yogo (2005) take an F of 10 (t about 3.2) as the bound of a weak
#: instrument (m); ours is stricter.
MIN_COURSE_T = 5.0
#: Least root-mean-square of the store's course at equal temperature (the instrument), as a
#: share of the median night NEE, for the slope to be judged. Respiration's own course
#: through the night beyond temperature's is a few per cent of night NEE (an early-night
#: surplus of 20-30 % decaying over hours projects to about 3 %, measured in review76's
#: clean site-years); divided by a course of a tenth, it biases the slope by about +0.3,
#: below :data:`MIDWAY`. A store whose course is smaller moves NEE by less than a tenth
#: when counted twice (our choice, physically argued).
MIN_COURSE_SHARE = 0.1
#: Night records within a month needed to fit its temperature terms (our choice).
_MIN_MONTH_RECORDS = 50


def _within_month(values, regressors, month):
    """``values`` less their least-squares fit on ``regressors`` (and a constant) within
    each month."""
    out = np.full(len(values), np.nan)
    for key in np.unique(month):
        rows = np.flatnonzero(month == key)
        if len(rows) < _MIN_MONTH_RECORDS:
            continue
        design = np.column_stack([np.ones(len(rows)), *(r[rows] for r in regressors)])
        coef, *_ = np.linalg.lstsq(design, values[rows], rcond=None)
        out[rows] = values[rows] - design @ coef
    return out


def storage_slope(nee, storage, is_night, stamps, temperatures):
    """Slope of night NEE on the storage term at the same temperatures within a month.

    Parameters
    ----------
    nee : array_like
        NEE as formed (turbulent flux + storage) [µmol m-2 s-1].
    storage : array_like
        The storage term [µmol m-2 s-1].
    is_night : array_like of bool
        Records with the sun below the horizon.
    stamps : pandas.DatetimeIndex
        Start of each record (local standard time).
    temperatures : list of array_like
        Air (and soil) temperature [°C], fitted within each month.

    Returns
    -------
    tuple of float or None
        The slope and its standard error clustered by night (records from noon to noon);
        None where fewer than :data:`MIN_NIGHTS` nights hold every value, the storage
        term does not vary at equal temperatures, its course there is below
        :data:`MIN_COURSE_SHARE` of the median night NEE, or that course does not resolve
        the storage term (its first-stage slope below :data:`MIN_COURSE_T` standard
        errors).

    References
    ----------
    Cameron, A. C., & Miller, D. L. (2015). Journal of Human Resources 50, 317-372 (m).

    Stock, J. H., & Yogo, M. (2005). Testing for weak instruments in linear IV
    regression. In Identification and Inference for Econometric Models, 80-108 (m).

    Tang, J., Baldocchi, D. D., & Xu, L. (2005). Global Change Biology 11, 1298-1304 (m).
    """
    stamps = pd.DatetimeIndex(stamps)
    temps = [np.asarray(t, dtype=float) for t in temperatures]
    nee, storage = np.asarray(nee, dtype=float), np.asarray(storage, dtype=float)
    rows = np.asarray(is_night, dtype=bool) & np.isfinite(nee) & np.isfinite(storage)
    for temp in temps:
        rows &= np.isfinite(temp)
    night = (stamps - pd.Timedelta(hours=12)).normalize().to_numpy()[rows]
    if len(np.unique(night)) < MIN_NIGHTS:
        return None
    month = stamps.year.to_numpy()[rows] * 12 + stamps.month.to_numpy()[rows]
    slot = month * 1440 + (stamps.hour.to_numpy() * 60 + stamps.minute.to_numpy())[rows]
    # the store's course at that time of night in the month's other nights: the record's
    # own noise, shared by NEE and the storage term, left out
    groups = pd.Series(storage[rows]).groupby(slot)
    count = groups.transform("count").to_numpy()
    with np.errstate(invalid="ignore", divide="ignore"):
        course = np.where(count > 1, (groups.transform("sum").to_numpy() - storage[rows])
                          / (count - 1), np.nan)
    regressors = [t[rows] ** power for t in temps for power in (1, 2)]
    night_nee = nee[rows]
    flux = _within_month(night_nee, regressors, month)
    store = _within_month(storage[rows], regressors, month)
    typical = _within_month(course, regressors, month)
    kept = np.isfinite(flux) & np.isfinite(store) & np.isfinite(typical)
    flux, store, typical, night = flux[kept], store[kept], typical[kept], night[kept]
    spread = float(typical @ store)
    if len(np.unique(night)) < MIN_NIGHTS or spread <= 0.0:
        return None
    # a course small beside night NEE: respiration's own course would pass for it
    if np.sqrt(np.mean(typical ** 2)) < MIN_COURSE_SHARE * np.median(np.abs(night_nee[kept])):
        return None
    # the instrument must carry the store: its own slope on the store resolved
    first = spread / float(typical @ typical)
    first_scores = pd.Series(typical * (store - first * typical)).groupby(night).sum()
    first_error = float(np.sqrt(first_scores @ first_scores) / (typical @ typical))
    if not first > MIN_COURSE_T * first_error:
        return None
    slope = float(typical @ flux) / spread
    scores = pd.Series(typical * (flux - slope * store)).groupby(night).sum().to_numpy()
    return slope, float(np.sqrt(scores @ scores) / spread)


def night_nee_follows_storage(turbulent, storage, is_night, stamps, temperatures,
                              columns=None) -> str | None:
    """A message where night NEE rises with the storage term as a store counted twice.

    Parameters
    ----------
    turbulent : array_like
        The column mapped as ``nee`` beside a ``storage`` column [µmol m-2 s-1].
    storage : array_like
        The column mapped as ``storage`` [µmol m-2 s-1].
    is_night, stamps, temperatures
        As for :func:`storage_slope`.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text where the slope of NEE (turbulent + storage) on the storage
        term stands :data:`MIN_Z` standard errors above :data:`MIDWAY`; None otherwise.

    References
    ----------
    Finnigan, J. (2006). Agricultural and Forest Meteorology 136, 108-113.
    """
    turbulent = np.asarray(turbulent, dtype=float)
    storage = np.asarray(storage, dtype=float)
    fitted = storage_slope(turbulent + storage, storage, is_night, stamps, temperatures)
    if fitted is None:
        return None
    slope, error = fitted
    if not slope - MIN_Z * error > MIDWAY:
        return None
    names = columns or {}
    flux, term = names.get("nee", "nee"), names.get("storage", "storage")
    return (f"the column mapped as nee ({flux!r}) looks like it already holds the storage "
            f"term in {term!r}: at night NEE ({flux!r} + {term!r}) rises with the storage "
            f"term at the same air and soil temperature within each month (slope "
            f"{slope:+.2f} ± {error:.2f}), while respiration does not follow how its CO2 "
            "splits between the store and the flux through the sensor (slope about 0 where "
            "NEE is formed once); adding the storage column counts the store twice, which "
            "partitioning reads as more respiration by night and more uptake by day; if "
            f"{flux!r} is NEE (turbulent flux + storage), remove the storage mapping; if "
            "it is a turbulent flux gap-filled before the storage was added (its filled "
            "nights lack the store's counterpart), map the flux unfilled")
