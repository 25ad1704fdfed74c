"""An air temperature whose daily course is damped against the humidity's (round mistakes50).

VPD = e_s(T) (1 - RH / 100) holds at one moment with the temperature T of the air whose
humidity was measured (Campbell & Norman 1998, ch. 3 (m)), so the VPD and RH columns
imply the air temperature of each record (the inverse of the Magnus form,
:func:`~fluxpart.variables.saturation_temperature`). A thermometer of that air follows
the implied temperature's daily course one to one. A column whose daily course swings
clearly less is another temperature: the sonic anemometer's (its path-averaged, virtual
temperature, written by the flux program beside u*, is smoothed by the path and by the
transducers' own heat (m)), a sensor in the canopy's shade or near a wall, or a series
averaged over hours. A constant offset (the virtual temperature lies 0.5-2 K above the
air's, Kaimal & Gaynor 1991 (m)) moves no budget, since Rref absorbs it; the damping
does: the nights' temperature range shrinks, so the Lloyd-Taylor E0 rises and the
respiration extrapolated to the day changes. On the invented grassland example a
sonic-like tair (+2 K, its daily course damped to 2/3 around each day's mean) moved
nighttime GPP by -38.6 g C m-2 (2.5 sigma) and nighttime Reco by -35.9 without a word;
damped to 0.8, GPP by -19.6 (1.3 sigma). A VPD computed from RH with a thermometer that
swings more than the air (heated by the sun) gives the same pattern, so the message
names that cause too.

A VPD computed from the tair column itself implies tair exactly (ratio 1): such a file
can say nothing, and is never named. Nor is a VPD and an RH of two hygrometers that
differ by a few percent (the implied temperature then departs with RH's daily course,
which the fit takes out: :func:`damped_ratio`), nor the records below freezing, where a
VPD may be taken over ice.

References
----------
Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
2nd ed. Springer, ch. 3 (m).

Kaimal, J. C., & Gaynor, J. E. (1991). Another look at sonic thermometry.
Boundary-Layer Meteorology 56, 401-410 (m).

Lloyd, J., & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8, 315-323.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .daily_anomaly import daily_anomaly
from .variables import saturation_temperature, saturation_vapour_pressure

__all__ = ["DAMPED_RATIO", "STAGE", "damped_months", "damped_ratio", "damped_tair"]

#: The stage named in the preflight finding.
STAGE = "input (tair damped)"

#: Largest ratio of the tair column's daily swing to the implied temperature's that is
#: named [1]. Our choice: two thermometers of one air agree within a few percent of a
#: daily swing of several K. Measured on the example: damped to 0.85 its nighttime GPP
#: moved by -0.5 sigma, to 0.8 by -1.3, to 2/3 by -2.5; the bound names a damping before
#: it moves a sum beyond its 1 sigma.
DAMPED_RATIO = 0.85
#: Smallest correlation of the two daily courses [1]: below it the columns are not one
#: air's temperature at all, a case of other checks (a soil's, a delayed one).
_MIN_CORRELATION = 0.9
#: Highest RH [%] of a record judged: nearer saturation, 1 - RH / 100 is small and the
#: VPD column's rounding moves the implied temperature by tenths of a K (the bound of
#: :func:`fluxpart.column_faults.delayed_tair`).
_MAX_RH = 90.0
#: Lowest air temperature [degC] of a record judged: below freezing a logger's VPD may be
#: taken over ice while RH is over water (the meteorological convention, WMO (m)), and
#: the implied temperature then lies up to 2 K below the air's on cold nights (review64:
#: the example's January and February read 0.62 and 0.69, named, with tair right).
_MIN_TAIR = 0.0
#: Fewest days' worth of records with both daily courses present to judge [days] (half
#: of each day's records, those of RH up to :data:`_MAX_RH` %, counted).
_MIN_DAYS = 30
#: The same for a calendar month judged alone [days] (our choice: a third of a month).
_MIN_MONTH_DAYS = 10


def damped_ratio(tair, rh, vpd, interval_minutes: float) -> tuple[float, float, int]:
    """The tair column's daily swing against the one VPD and RH imply.

    Parameters
    ----------
    tair : array_like
        The column mapped as air temperature [degC].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        Vapour pressure deficit [hPa].
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    tuple of (float, float, int)
        The ratio [1]: the inverse of the slope of the implied temperature's daily
        anomaly on the tair column's, fitted with the humidity term beside it (1 for one
        air, below 1 for a damped tair); the correlation of the two anomalies [1] and the
        number of records judged; NaN where fewer than :data:`_MIN_DAYS` days' worth of
        records judge.

    Notes
    -----
    The series keep only the records with RH of 1 to :data:`_MAX_RH` %, VPD above 0 and
    tair of :data:`_MIN_TAIR` degC or more; each less its centred 24-h running mean over
    those records (a day's warmth and the season left out). The slope is fitted with the
    tair column as a regressor: the noise of the VPD column's rounding in the implied
    temperature does not bias it, and the tair column's own noise only raises the ratio
    (a damped column is then named less often, never more).

    The second regressor is the humidity term h / (1 - h) / (d ln e_s / dT), h = RH /
    100 [K]. Where VPD and RH come from two hygrometers whose vapour pressures differ by
    a factor k (VPD from the gas analyser's water vapour and tair, RH from the probe),
    e_s(T_implied) = e_s(T) (1 - (k - 1) h / (1 - h)), so the implied temperature departs
    from the air's by about -(k - 1) times that term: a departure that follows RH's daily
    course, anti-phased with the temperature's, which the plain slope read as a damped
    tair (on the example, k = 1.03, within two hygrometers' specifications: ratio 0.84,
    named; k = 1.05: 0.75). With the term beside it the slope is 1.00 and 1.01 there,
    while a damping of 2/3 or 0.8 reads 0.68 and 0.80 (review64).

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    """
    a_tair, a_implied, a_humidity, per_day = _anomalies(tair, rh, vpd, interval_minutes)
    return _ratio(a_tair, a_implied, a_humidity, _MIN_DAYS * per_day // 2)


def _anomalies(tair, rh, vpd, interval_minutes: float):
    """Daily anomalies of tair, of the temperature VPD and RH imply and of the humidity
    term (NaN where not judged), and the records per day; empty where the interval or
    lengths do not fit."""
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    per_day = int(round(1440 / interval_minutes)) if interval_minutes > 0 else 0
    if per_day < 4 or not tair.size == rh.size == vpd.size:
        return np.empty(0), np.empty(0), np.empty(0), max(per_day, 1)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        usable = (np.isfinite(tair) & np.isfinite(rh) & np.isfinite(vpd) & (rh >= 1.0)
                  & (rh <= _MAX_RH) & (vpd > 0) & (tair >= _MIN_TAIR))
        implied = saturation_temperature(np.where(usable, vpd / (1.0 - rh / 100.0), np.nan))
        humidity = (rh / (100.0 - rh)) / _log_slope(tair)
    usable &= np.isfinite(implied) & (implied > -60) & (implied < 60) & np.isfinite(humidity)
    return (daily_anomaly(np.where(usable, tair, np.nan), per_day),
            daily_anomaly(np.where(usable, implied, np.nan), per_day),
            daily_anomaly(np.where(usable, humidity, np.nan), per_day), per_day)


def _log_slope(tair):
    """d ln e_s / dT of :func:`~fluxpart.variables.saturation_vapour_pressure` [1/K]
    (a centred difference over 1 K)."""
    return (np.log(saturation_vapour_pressure(tair + 0.5))
            - np.log(saturation_vapour_pressure(tair - 0.5)))


def _ratio(a_tair, a_implied, a_humidity, minimum: int) -> tuple[float, float, int]:
    """1 / (the implied temperature's slope on tair with the humidity term beside it),
    the correlation of tair and the implied temperature and the records counted (NaN
    below `minimum` records or without a positive slope)."""
    both = np.isfinite(a_tair) & np.isfinite(a_implied) & np.isfinite(a_humidity)
    count = int(both.sum())
    if count < max(minimum, 2):
        return np.nan, np.nan, count
    x, y, z = (v[both] - v[both].mean() for v in (a_tair, a_implied, a_humidity))
    sxx, syy, szz = float(np.sum(x * x)), float(np.sum(y * y)), float(np.sum(z * z))
    sxy, sxz, szy = float(np.sum(x * y)), float(np.sum(x * z)), float(np.sum(z * y))
    determinant = sxx * szz - sxz * sxz
    if sxy <= 0 or sxx * syy <= 0:
        return np.nan, np.nan, count
    # a humidity term without a spread of its own (RH constant) leaves the plain slope
    slope = ((sxy * szz - szy * sxz) / determinant if determinant > 1e-9 * sxx * szz
             else sxy / sxx)
    if slope <= 0:
        return np.nan, np.nan, count
    return 1.0 / slope, sxy / np.sqrt(sxx * syy), count


def damped_months(tair, rh, vpd, index, interval_minutes: float) -> dict:
    """:func:`damped_ratio` of each calendar month with :data:`_MIN_MONTH_DAYS` days'
    worth of records judged (the anomalies taken over the whole record).

    Parameters
    ----------
    tair, rh, vpd : array_like
        Air temperature [degC], relative humidity [%], VPD [hPa] of each record.
    index : pandas.DatetimeIndex
        The records' stamps, same length (calendar months).
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    dict
        ``"YYYY-MM"`` -> (ratio [1], correlation [1], records), months judged only.
    """
    a_tair, a_implied, a_humidity, per_day = _anomalies(tair, rh, vpd, interval_minutes)
    if a_tair.size == 0 or len(index) != a_tair.size:
        return {}
    stamps = pd.DatetimeIndex(index)
    # each record's calendar month as a number (-1 at NaT), numbered in order of first
    # appearance; a stable sort gathers each month's records in their own order, so
    # one pass over the record, not a string comparison of every record per month
    codes, _ = pd.factorize(np.asarray(stamps.year, dtype=float) * 12
                            + np.asarray(stamps.month, dtype=float))
    order = np.argsort(codes, kind="stable")
    starts = np.searchsorted(codes[order], np.arange(codes.max() + 2))
    labels = stamps[order[starts[:-1]]].strftime("%Y-%m")
    out = {}
    for month, start, stop in zip(labels, starts[:-1], starts[1:], strict=True):
        rows = order[start:stop]
        ratio = _ratio(a_tair[rows], a_implied[rows], a_humidity[rows],
                       _MIN_MONTH_DAYS * per_day // 2)
        if np.isfinite(ratio[0]):
            out[month] = ratio
    return out


def damped_tair(tair, rh, vpd, interval_minutes: float, columns=None,
                index=None) -> str | None:
    """A message where the tair column's daily course swings less than the air's, or None.

    Parameters
    ----------
    tair, rh, vpd : array_like
        Air temperature [degC], relative humidity [%], VPD [hPa] of each record.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.
    index : pandas.DatetimeIndex, optional
        The records' stamps: where the whole record is not named, each calendar month
        is judged alone (:func:`damped_months`).

    Returns
    -------
    str or None
        The warning text; None where the ratio of :func:`damped_ratio` is
        :data:`DAMPED_RATIO` or more, its correlation below :data:`_MIN_CORRELATION`, or
        too few records judge (a VPD computed from the tair column gives a ratio of 1),
        and, with `index`, no month is named by the same rule.

    References
    ----------
    Kaimal, J. C., & Gaynor, J. E. (1991). Another look at sonic thermometry.
    Boundary-Layer Meteorology 56, 401-410 (m).
    """
    ratio, correlation, count = damped_ratio(tair, rh, vpd, interval_minutes)
    names = columns or {}
    where = f"{count} records"
    if not (ratio < DAMPED_RATIO and correlation >= _MIN_CORRELATION):
        if index is None:
            return None
        # a sonic's temperature pasted in for some months (a humidity probe's
        # thermometer lost for a summer), diluted below the rule over the record
        months = {month: values for month, values
                  in damped_months(tair, rh, vpd, index, interval_minutes).items()
                  if values[0] < DAMPED_RATIO and values[1] >= _MIN_CORRELATION}
        if not months:
            return None
        ratio = float(np.median([values[0] for values in months.values()]))
        correlation = float(np.median([values[1] for values in months.values()]))
        where = (f"in {len(months)} month(s): "
                 + ", ".join(f"{m} ({v[0]:.2f})" for m, v in list(months.items())[:6])
                 + (" and more" if len(months) > 6 else ""))
    return (f"air temperature (column {names.get('tair', 'tair')!r}) swings {ratio:.2f} "
            f"times as far over the day as the air temperature that VPD "
            f"({names.get('vpd', 'vpd')!r}) and RH ({names.get('rh', 'rh')!r}) imply "
            f"({where}; correlation of the daily courses {correlation:.2f}), where "
            "two thermometers of one air agree within a few percent: a damped temperature "
            "(the sonic anemometer's, a sensor in the canopy's shade, a series averaged "
            "over hours) narrows the nights' temperature range and moves E0 and the "
            "respiration extrapolated to the day; map the shielded air thermometer (the "
            "humidity probe's own) as tair, or, if tair is right, the VPD was computed "
            "with a thermometer that swings more than the air (heated by the sun)")
