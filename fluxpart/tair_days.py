"""Air temperature whole days away from the humidity columns (round mistakes28).

A shift of the air-temperature column by whole days (a second logger's file joined by a
day of year counted from 0 instead of 1, or by the wrong year's leap day) keeps its
diurnal course in step with the sun and with the humidity probe's, so the clock check
and the shift of up to two hours (:func:`.record_shifts.tair_lag`) see nothing. The
weather of one day, though, is not the next day's: VPD = e_s(T) (1 - RH / 100) holds at
one moment (Campbell & Norman 1998, ch. 3 (m)), and the changes from record to record of
the VPD column then follow e_s(T) (1 - RH / 100) computed with the air temperature of
another day better than with that of the same day. On the invented grassland example
tair a day late moved the nighttime GPP by -64.3, Reco by -61.4 and the daytime GPP by
-57.9 g C m-2, named only as the two methods preferring different respiration
temperatures.

References
----------
Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
2nd ed. Springer, ch. 3 (m).
"""
from __future__ import annotations

import numpy as np

from .record_shifts import _MAX_SHIFT_DAYS, _correlation, _decide
from .variables import saturation_vapour_pressure

__all__ = ["MIN_CORRELATION", "tair_day_shift"]

#: Correlation the changes of the VPD column and of e_s(T) (1 - RH / 100) must reach at
#: the best whole-day shift [1]: an air temperature from the humidity probe itself gives
#: about 1 there; a separate thermometer beside it follows the weather closely too. The
#: bound is the one the delayed-course check uses (``column_faults._DELAY_MIN_CORRELATION``);
#: below it the columns agree too loosely to tell a day from another.
MIN_CORRELATION = 0.8


def tair_day_shift(tair, rh, vpd, interval_minutes: float, columns=None) -> str | None:
    """A message where the air temperature fits the humidity columns whole days away.

    Parameters
    ----------
    tair : array_like
        Air temperature of each record [°C].
    rh : array_like
        Relative humidity of each record [%].
    vpd : array_like
        Vapour pressure deficit of each record [hPa], as the file gives it.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the same day fits best, too few records pair, or the
        best fit stays below :data:`MIN_CORRELATION`.

    Notes
    -----
    For each shift of ``k`` whole days (1 to 31 either way, as the NEE's day-shift check,
    :func:`.record_shifts.nee_day_shift`) the record-to-record changes of the VPD column
    are correlated with those of e_s(T) (1 - RH / 100), T the air temperature ``k`` days
    later. Where a shift other than 0 correlates more strongly than the same day's by 3
    standard errors of Fisher's z (sqrt(2 / (n - 3)), :func:`.record_shifts._decide`) and
    to :data:`MIN_CORRELATION` or more, tair is named as whole days away. Correctly
    aligned columns cannot do so: the clouds, fronts and showers that change the air's
    temperature and humidity within a day are that day's alone.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    """
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if tair.size < 3 or not tair.size == rh.size == vpd.size or interval_minutes <= 0:
        return None
    per_day = int(round(1440.0 / interval_minutes))
    d_vpd = np.diff(vpd)
    # e_s(T) and 1 - RH/100 once (vpd_from_rh's two factors, element by element): each
    # shift moves e_s(T) as it would move T, so the product is vpd_from_rh's bit for bit
    with np.errstate(invalid="ignore", over="ignore"):
        saturation = saturation_vapour_pressure(tair)
    dryness = 1.0 - np.clip(rh, 0.0, 100.0) / 100.0
    scores = {}
    for days in range(-_MAX_SHIFT_DAYS, _MAX_SHIFT_DAYS + 1):
        k = days * per_day
        if abs(k) >= tair.size - 1:
            continue
        scores[days] = _correlation(np.diff(_shifted_vpd(saturation, dryness, k)), d_vpd)
    scores = {days: score for days, score in scores.items() if np.isfinite(score[0])}
    if 0 not in scores or len(scores) < 2:
        return None
    found = _decide(scores)
    if found is None or found[1] < MIN_CORRELATION:
        return None
    best, strength, same, apart = found
    names = columns or {}
    later = "later" if best > 0 else "earlier"
    return (f"air temperature (column {names.get('tair', 'tair')!r}) matches the VPD "
            f"(column {names.get('vpd', 'vpd')!r}) and RH (column {names.get('rh', 'rh')!r}) "
            f"best {abs(best)} day(s) {later} (correlation of the changes of VPD and "
            f"e_s(T) (1 - RH / 100) {strength:.2f} there, {same:.2f} on the same day, "
            f"{apart:.0f} standard errors apart): VPD holds at one moment, so the tair "
            f"column looks {abs(best)} day(s) away from the humidity columns (a file "
            "joined by a day of year counted differently); align the columns in a copy "
            "of the file")


def _shifted_vpd(saturation, dryness, k):
    """``vpd_from_rh(rh, tair moved by k records)`` (NaN where the move leaves no value)
    from ``saturation = saturation_vapour_pressure(tair)`` and ``dryness = 1 - clip(rh,
    0, 100) / 100`` [hPa]."""
    shifted = np.full(saturation.size, np.nan)
    if k >= 0:
        shifted[:saturation.size - k] = saturation[k:]
    else:
        shifted[-k:] = saturation[:k]
    return shifted * dryness
