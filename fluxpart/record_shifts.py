"""Columns shifted in time against their drivers, and NEE whose light response turned.

Mapping and clock faults no plausible range can see, found from the changes from one
record to the next, which the true columns must share in the same record:

* NEE shifted by whole records against the drivers (:func:`nee_lag`): photosynthesis
  answers a change of light within minutes, so a cloud's change of Rg and the change
  of NEE it causes fall into the same record (the cloud-driven part of Rg's change
  only, against a clear-sky course, :func:`clear_sky_course`, and each change less its
  mean at that time of day); by hours up to a time zone's 14 (:func:`nee_hour_shift`),
  or from some month on only (:func:`nee_shift_from_month`);
* air temperature shifted by whole records against the humidity columns
  (:func:`tair_lag`): VPD is a function of temperature and humidity at one moment;
* NEE and the weather whole days apart (:func:`nee_day_shift`): a cloud changes light
  and uptake in the same record, not in the record a day later;
* NEE whose sign changed within the record (:func:`months_rising_with_light`): in
  months (or, where no month is named, weeks) whose NEE rises with each brightening
  while other months' falls.

Each returns a one-line message (the caller's warning) or None; they only warn (see
each function's Notes). Each shift is judged by Fisher's z of the best shifted
correlation against the unshifted one (:func:`_decide`), the best of several shifts or
periods past Bonferroni's bound for them (:func:`_family_bound`). The other column
faults are in :mod:`fluxpart.column_faults`, which keeps the names it exported.
"""

from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np
import pandas as pd

from ._groups import group_positions
from .constants import SOLAR_CONSTANT
from .variables import vpd_from_rh

__all__ = ["RECORD_SHIFT_WORDS", "clear_sky_course", "months_rising_with_light", "nee_day_shift",
           "nee_hour_shift", "nee_lag", "nee_shift_from_month", "tair_lag"]

#: The widest shift looked for [min]: two hours of records either way.
_MAX_SHIFT_MINUTES = 120


#: Standard errors by which the Fisher z of the best shifted correlation must exceed
#: that of the unshifted one (3: the conventional threshold of a clear difference;
#: the standard error sqrt(2 / (n - 3)) of two independent correlations is an upper
#: bound for two correlations of the same records, which share most of their noise).
_LAG_STANDARD_ERRORS = 3.0


#: Minimum correlation of the Rg and NEE changes at the best shift: below it the NEE
#: noise hides the light response and no shift can be told. Our choice.
_MIN_CORRELATION = 0.1


_MIN_PAIRS = 500


#: Correlation of the changes of the VPD column and of e_s(T) (1 - RH / 100) at the best
#: shift of tair that marks the VPD as written from this very temperature record: then
#: the two agree to the written digits (our choice; two sensors, even side by side,
#: differ by their noise and response times, and their changes agree less closely, so a
#: tair from another sensor or height than the humidity probe's is never named).
_SAME_SENSOR = 0.98


#: Correlation of a month's sunlit changes of NEE and Rg beyond which the month's light
#: response is clear, either way [1] (with 3 standard errors of Fisher's z): a month of
#: active vegetation has a negative one (more light, more uptake, within the record),
#: a dormant month one near 0 (its respiration follows temperature, hours behind the
#: light, and the random error of the changes dominates). Our choice.
_CLEAR_RESPONSE = 0.2


#: Sunlit pairs a month needs to be judged (about 10 days of half-hours with the sun up).
_MONTH_PAIRS = 100


#: Days of the blocks judged where no month is (since mistakes17): a sign flipped for a
#: week or two inside a month leaves that month's correlation diluted by its other
#: days. A week holds 100 sunlit pairs of half-hours from about 4 h of sun a day (the
#: same count a month needs), so every block outside the polar winter is judged. Our
#: choice.
_SIGN_BLOCK_DAYS = 7


def _records_per_day(interval_minutes: float) -> int:
    """Records in a day [1] of an interval [min] that divides it.

    The daily checks compare records by position within days; an interval that does not
    divide the day's 1440 minutes (7 min: 205.7 records) moves each day's records against
    the last one's time of day, so it is refused, naming it (leftovers56: it drifted).
    The reader and ``process`` accept 30- and 60-minute records only; this guards a
    direct call.
    """
    if not interval_minutes > 0 or 1440.0 % float(interval_minutes):
        raise ValueError(f"interval_minutes = {interval_minutes:g} does not divide a day "
                         "(1440 minutes): the daily checks need whole records per day")
    return int(round(1440.0 / interval_minutes))


def _correlation(a: np.ndarray, b: np.ndarray, minimum: int = _MIN_PAIRS) -> tuple[float, int]:
    """Pearson correlation of the pairs both present and their count (NaN below `minimum`)."""
    ok = np.isfinite(a)
    ok &= np.isfinite(b)
    count = int(np.count_nonzero(ok))
    if count < minimum:
        return math.nan, count
    # each column taken once (a copy) and centred in place: the values of
    # a[ok] - a[ok].mean(), without two more selections and two more arrays
    x, y = (v[ok] if v.dtype.kind == "f" else v[ok].astype(np.float64) for v in (a, b))
    x -= x.mean()
    y -= y.mean()
    # sums of products, not BLAS dot products: the same bits on every CPU and thread count
    scale = math.sqrt(float(np.sum(x * x)) * float(np.sum(y * y)))
    return (float(np.sum(x * y)) / scale if scale > 0 else math.nan), count


def _decide(scores: dict, bound: float = _LAG_STANDARD_ERRORS):
    """The shift whose correlation clearly beats the same record's, or None.

    `scores` maps a shift k [records] to (correlation, pairs), the correlation signed so
    that the physical relation is positive. Returns (k, its correlation, that of k = 0,
    Fisher z difference in standard errors) where k is not 0, its correlation reaches
    :data:`_MIN_CORRELATION` and its Fisher z exceeds that of k = 0 by `bound`
    (default :data:`_LAG_STANDARD_ERRORS`) standard errors (sqrt(2 / (n - 3))); otherwise
    None.
    """
    if not all(math.isfinite(v) for v, _ in scores.values()):
        return None
    best = max(scores, key=lambda k: scores[k][0])
    strength, count = scores[best]
    if best == 0 or strength < _MIN_CORRELATION:
        return None
    z_best = math.atanh(min(strength, 0.999999))
    z_zero = math.atanh(max(min(scores[0][0], 0.999999), -0.999999))
    error = math.sqrt(2.0 / (min(count, scores[0][1]) - 3))
    if z_best - z_zero <= bound * error:
        return None
    return best, strength, scores[0][0], (z_best - z_zero) / error


def tair_lag(tair, rh, vpd, interval_minutes: float, columns=None) -> str | None:
    """A message where the air temperature fits the humidity columns shifted, or None.

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
        The warning text; None where the VPD implied by RH and the air temperature of
        the same record follows the VPD column best (always so for a VPD derived from
        RH and tair), or the changes cannot tell.

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) holds at one moment (Campbell & Norman 1998, ch. 3
    (m)); a humidity probe's temperature and a separate air-temperature sensor both
    answer within minutes, far less than a record. The changes from record to record
    of the VPD column are correlated with those of e_s(T) (1 - RH / 100) computed with
    the air temperature ``k`` records later; where a ``k`` other than 0 correlates
    clearly better (3 standard errors of Fisher's z, as :func:`nee_lag`) and to 0.98 or
    more (the VPD column written from this very temperature, :data:`_SAME_SENSOR`), the
    tair column is named as shifted against RH and VPD. An air temperature from another
    sensor than the humidity probe's fits less closely at every shift and is left alone,
    unless its daily cycle trails the probe's by whole records (a sensor below a canopy,
    say), which no record can tell from a shifted clock.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    """
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if tair.size < 3 or not tair.size == rh.size == vpd.size or interval_minutes <= 0:
        return None
    most = max(1, int(_MAX_SHIFT_MINUTES // interval_minutes))
    scores = {}
    d_vpd = np.diff(vpd)
    for k in range(-most, most + 1):
        shifted = np.full(tair.size, np.nan)
        if k >= 0:
            shifted[:tair.size - k] = tair[k:]
        else:
            shifted[-k:] = tair[:k]
        with np.errstate(invalid="ignore", over="ignore"):
            implied = vpd_from_rh(rh, shifted)
        r, count = _correlation(np.diff(implied), d_vpd)
        scores[k] = (r, count)
    found = _decide(scores)
    if found is None or found[1] < _SAME_SENSOR:
        return None
    best, strength, same, apart = found
    names = columns or {}
    later = "later" if best > 0 else "earlier"
    return (f"air temperature (column {names.get('tair', 'tair')!r}) matches the VPD "
            f"(column {names.get('vpd', 'vpd')!r}) and RH (column {names.get('rh', 'rh')!r}) "
            f"best {abs(best)} record(s) ({abs(best) * interval_minutes:g} min) {later} "
            f"(correlation of the changes of VPD and e_s(T) (1 - RH / 100) {strength:.2f} "
            f"there, {same:.2f} in the same record, {apart:.0f} standard errors apart): VPD holds at one "
            f"moment, so the tair column looks shifted by {abs(best)} record(s) against "
            "the humidity columns (a second logger's clock); align the columns in a copy of "
            "the file")


def _change_scores(d_nee, d_rg, shifts: dict) -> dict:
    """Per key of `shifts` (key -> shift k in records): (−r, pairs), r the correlation of the
    change of NEE from record t + k to the next (`d_nee`) with that of Rg from record t to
    the next (`d_rg`: :func:`_sunlit_changes` or :func:`_cloud_changes`, NaN where not
    judged), over the pairs both present."""
    scores = {}
    for key, k in shifts.items():
        r, count = _correlation(*_shift_pairs(d_nee, d_rg, k))
        scores[key] = (-r, count)
    return scores


def _judged_change_scores(d_nee, d_rg, shifts: dict) -> dict:
    """:func:`_change_scores` over the pairs whose Rg change is judged (finite) only: the
    same pairs in the same order, so the same correlations to the bit, without carrying
    the night's pairs through every shift (the days' check compares 558)."""
    judged = np.flatnonzero(np.isfinite(d_rg))
    rg_judged = d_rg[judged]
    scores = {}
    for key, k in shifts.items():
        inside = (judged + k >= 0) & (judged + k < d_nee.size)
        r, count = _correlation(d_nee[judged[inside] + k], rg_judged[inside])
        scores[key] = (-r, count)
    return scores


def _moment_change_scores(d_nee, d_rg, shifts) -> dict:
    """:func:`_change_scores` of each shift k of `shifts` [records], to rounding (some
    1e-12), from the pairs' moments for all shifts at once: the count, the sums, the sums
    of squares and of products of the pairs both present at each k are cross-correlations
    of the two series (NaN as 0) and of their masks, each taken by one product of discrete
    Fourier transforms (the correlation theorem; Press et al. 2007, Numerical Recipes,
    3rd ed., section 13.2 (m)) rather than by one pass over the pairs per shift.

    Each series is taken less the mean of its present values first (a correlation is the
    same for any constant subtracted), so the sums of squares less the squared sums lose
    no digits to a large mean. A screen: a check that names a shift takes its correlation
    again from its sums of products (:func:`_judged_change_scores`)."""
    size = d_nee.size
    present_a, present_b = np.isfinite(d_nee), np.isfinite(d_rg)
    shifts = np.asarray(list(shifts), dtype=int)
    if not present_a.any() or not present_b.any() or shifts.size == 0:
        return {int(k): (math.nan, 0) for k in shifts}
    a = np.where(present_a, d_nee - d_nee[present_a].mean(), 0.0)
    b = np.where(present_b, d_rg - d_rg[present_b].mean(), 0.0)
    # no pair wraps around: the series and the widest shift of zeros after it, to the next
    # length of factors 2, 3 and 5 only (the transforms' fast sizes)
    length = _smooth_length(size + int(np.abs(shifts).max()) + 1)

    def transform(values):
        return np.fft.rfft(values, length)

    fa = [transform(v) for v in (present_a.astype(float), a, a * a)]
    fb = [transform(v) for v in (present_b.astype(float), b, b * b)]

    def cross(x, y):       # sum over t of x(t + k) y(t), at each shift k (index k mod length)
        return np.fft.irfft(x * np.conj(y), length)[shifts % length]

    count = np.rint(cross(fa[0], fb[0]))
    sum_a, sum_b = cross(fa[1], fb[0]), cross(fa[0], fb[1])
    sxx = cross(fa[2], fb[0]) - sum_a * sum_a / np.maximum(count, 1.0)
    syy = cross(fa[0], fb[2]) - sum_b * sum_b / np.maximum(count, 1.0)
    sxy = cross(fa[1], fb[1]) - sum_a * sum_b / np.maximum(count, 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        r = sxy / np.sqrt(np.clip(sxx, 0.0, None) * np.clip(syy, 0.0, None))
    r = np.where((count >= _MIN_PAIRS) & np.isfinite(r), r, np.nan)
    return {int(k): (-float(v), int(n)) for k, v, n in zip(shifts, r, count, strict=True)}


def _smooth_length(least: int) -> int:
    """The least number of at least `least` whose prime factors are 2, 3 and 5 only."""
    best = 1 << max(int(least - 1).bit_length(), 0)
    fives = 1
    while fives < best:
        threes = fives
        while threes < best:
            length = threes << max(int(-(-least // threes) - 1).bit_length(), 0)
            best = min(best, length)
            threes *= 3
        fives *= 5
    return best


def _light_arrays(nee, rg, potential, interval_minutes: float | None = None, stamps=None):
    """NEE, Rg and potential radiation as float arrays for the checks of NEE against light,
    or None where they hold fewer than 3 records, differ in length (from `stamps` too,
    where given) or `interval_minutes` [min] is not positive."""
    nee, rg, potential = (np.asarray(values, dtype=float) for values in (nee, rg, potential))
    lengths = {nee.size, rg.size, potential.size} | ({len(stamps)} if stamps is not None
                                                     else set())
    if nee.size < 3 or len(lengths) > 1 or (interval_minutes is not None
                                            and interval_minutes <= 0):
        return None
    return nee, rg, potential


#: Haurwitz's clear-sky global radiation G = a cos(z) exp(-b / cos(z)) [W m-2], with
#: a = 1098 W m-2 and b = 0.057 (Haurwitz 1945; Reno, Hansen & Stein 2012, SAND2012-2389,
#: eq. 4 (m)): the shape of a cloudless day's course from the sun's zenith angle z alone.
_HAURWITZ_A = 1098.0


_HAURWITZ_B = 0.057


#: Least cos(z) at which a record is judged for cloud (the sun about 6 degrees up): at a
#: lower sun an interval's mean and the sensor's cosine error make Rg's ratio to any
#: clear-sky course meaningless. Our choice.
_CLOUD_MIN_COSZ = 0.1


#: Quantile of Rg's ratio to Haurwitz's course taken as the site's clear-sky level in each
#: class of sun height (its turbidity, altitude and sensor calibration): clear records are
#: the brightest ones at every site with clouds, and nearly all records at a desert's.
#: Our choice.
_CLEAR_QUANTILE = 0.9


#: A record below this share of the clear-sky level is under cloud: a cloudless day's
#: turbidity moves Rg by some 10 % from day to day (m), a cloud by more. Our choice.
_CLOUDY_SHARE = 0.8


def clear_sky_course(potential) -> np.ndarray:
    """Haurwitz's clear-sky global radiation at each record [W m-2].

    Parameters
    ----------
    potential : array_like
        Potential radiation of each record [W m-2]; cos(z) is taken as its ratio to the
        solar constant (the Earth's orbit moves that by 3.4 % either way, the shape not).

    Returns
    -------
    numpy.ndarray
        a cos(z) exp(-b / cos(z)) [W m-2], 0 with the sun down.

    References
    ----------
    Haurwitz, B. (1945). Insolation in relation to cloudiness and cloud density. Journal
    of Meteorology, 2, 154-166 (m).
    Reno, M. J., Hansen, C. W., & Stein, J. S. (2012). Global horizontal irradiance clear
    sky models: implementation and analysis. Sandia report SAND2012-2389, eq. 4 (m).
    """
    cosz = np.clip(np.asarray(potential, dtype=float) / SOLAR_CONSTANT, 0.0, None)
    with np.errstate(divide="ignore"):
        course = _HAURWITZ_A * cosz * np.exp(-_HAURWITZ_B / cosz)
    return np.where(cosz > 0, course, 0.0)


#: Width of the classes of cos(z) in which the site's clear-sky level is taken, and the
#: records a class needs (fewer: the level of the nearest classes). Our choice: 18
#: classes between the sun 6 degrees up and overhead, each some days of records.
_COSZ_CLASS = 0.05


_CLASS_RECORDS = 20


def _clear_level(ratio, cos_z, rising) -> np.ndarray:
    """The site's clear-sky level of Rg's ratio to Haurwitz's course at each record: the
    :data:`_CLEAR_QUANTILE` of the ratio in its class of cos(z), linear between classes,
    morning (`rising`: the potential radiation rising) and afternoon apart. Haurwitz's
    constants are a mean atmosphere's; a site's turbidity, altitude, sensor (cosine
    error, calibration, a tilt) and the interval's mean over a moving sun bend the course
    by sun height, and unlike in the morning and the afternoon (a clock minutes off), which a clear or an evenly overcast day would otherwise show as a
    cloud's change every morning and afternoon."""
    classes = np.floor(np.where(np.isfinite(ratio), cos_z, np.nan) / _COSZ_CLASS)
    level = np.full(ratio.size, np.nan)
    for half in (True, False):
        centres, levels = [], []
        for c in np.unique(classes[np.isfinite(classes) & (rising == half)]):
            values = ratio[(classes == c) & (rising == half)]
            if values.size >= _CLASS_RECORDS:
                centres.append((c + 0.5) * _COSZ_CLASS)
                levels.append(float(np.quantile(values, _CLEAR_QUANTILE)))
        if centres:
            level = np.where(rising == half, np.interp(cos_z, centres, levels), level)
    return level


def _cloud_changes(nee, rg, potential) -> tuple[np.ndarray, np.ndarray]:
    """The changes of NEE and of the cloud-driven part of Rg from each record to the next:
    the change of Rg's ratio to the site's clear-sky course (:func:`clear_sky_course` times
    :func:`_clear_level`) times the two records' mean course [W m-2]; NaN unless the sun
    is :data:`_CLOUD_MIN_COSZ` up at both records and one of them is under cloud (below
    :data:`_CLOUDY_SHARE` of the site's clear-sky level)."""
    course = clear_sky_course(potential)
    high = np.asarray(potential, dtype=float) / SOLAR_CONSTANT >= _CLOUD_MIN_COSZ
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(high, rg / np.where(high, course, 1.0), np.nan)
    if not np.isfinite(ratio).any():
        return np.diff(nee), np.full(max(nee.size - 1, 0), np.nan)
    level = _clear_level(ratio, potential / SOLAR_CONSTANT, np.gradient(potential) > 0)
    ratio, clear = ratio / level, course * level
    cloudy = high & (ratio < _CLOUDY_SHARE)
    judged = high[1:] & high[:-1] & (cloudy[1:] | cloudy[:-1])
    # the change of the ratio to the site's clear-sky course at the pair's mean course:
    # Rg's change less the change its course gives at an unchanged cloudiness (a day
    # evenly overcast moves Rg with the sun alone, as a cloudless one)
    with np.errstate(invalid="ignore"):
        change = np.diff(ratio) * 0.5 * (clear[1:] + clear[:-1])
    return np.diff(nee), np.where(judged, change, np.nan)


#: Days of the running window in which the mean course of a change at each time of day is
#: taken (:func:`_less_daily_course`), centred on the day: a month, the span over which
#: climatologies composite the diurnal cycle (common practice), short against the
#: season's change of the sun's course (the declination moves by at most 0.4 degrees a
#: day, near the equinoxes; fact of the trade). Under cloud on one day in five it still
#: holds some six cloudy values of each time of day, so a departure keeps most of itself
#: (a mean of n values removes 1/n of each); 15 days held three (measured in round lag56:
#: more hits lost, more chance alarms). Our choice.
_COURSE_DAYS = 31


#: Least values of a time of day in the window for its mean course (fewer: not judged).
#: Our choice.
_COURSE_VALUES = 3


def _less_daily_course(changes, per_day: int, days: int = _COURSE_DAYS,
                       least: int = _COURSE_VALUES) -> np.ndarray:
    """`changes` less their mean at the same time of day (the same position in the day of
    `per_day` records) over the `days` days centred on each day (the days of the record
    alone near its ends: fewer, not centred), over the values present; NaN where fewer
    than `least` are. Days are blocks of `per_day` records from the first, which need not
    start at midnight."""
    changes = np.asarray(changes, dtype=float)
    whole = -(-changes.size // per_day)
    grid = np.full(whole * per_day, np.nan)
    grid[:changes.size] = changes
    grid = grid.reshape(whole, per_day)
    present = np.isfinite(grid)
    sums = np.vstack([np.zeros((1, per_day)), np.cumsum(np.where(present, grid, 0.0), axis=0)])
    counts = np.vstack([np.zeros((1, per_day)), np.cumsum(present, axis=0)])
    day = np.arange(whole)
    low, high = np.clip(day - days // 2, 0, whole), np.clip(day + days // 2 + 1, 0, whole)
    total, count = sums[high] - sums[low], counts[high] - counts[low]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count >= least, total / count, np.nan)
    return (grid - mean).ravel()[:changes.size]


#: Lags [records] over which the serial correlation of the two change series inflates the
#: standard error of their cross-correlation (:func:`_serial_inflation`): a change from
#: one record to the next shares its record with the changes beside it (-0.5 at one
#: record for white noise), little beyond. Our choice.
_SERIAL_LAGS = 2


def _serial_inflation(a, b) -> float:
    """Factor (at least 1) on the standard error of a cross-correlation of `a` and `b` for
    their serial correlation: sqrt(1 + 2 sum_j r_a(j) r_b(j)) over lags j of 1 to
    :data:`_SERIAL_LAGS` records, r the autocorrelation over the pairs present (0 where
    too few), Bartlett's variance of the cross-correlation of two series unrelated to
    each other (Box, Jenkins & Reinsel 2008, ch. 11 (m))."""
    total = 0.0
    for j in range(1, _SERIAL_LAGS + 1):
        r_a, r_b = (_correlation(x[j:], x[:-j], 3)[0] if x.size > j else math.nan
                    for x in (a, b))
        if math.isfinite(r_a) and math.isfinite(r_b):
            total += r_a * r_b
    return math.sqrt(max(1.0, 1.0 + 2.0 * total))


def nee_lag(nee, rg, potential, interval_minutes: float, columns=None) -> str | None:
    """A message where NEE follows Rg by whole records, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    potential : array_like
        Potential radiation of each record [W m-2]; only changes between two records
        with the sun up count.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the changes of NEE and of Rg's cloud-driven part
        of the same record correlate best (or too few pairs under cloud, or too weak a
        correlation to tell).

    Notes
    -----
    Leaf photosynthesis follows a change of light within seconds to minutes (its
    light reactions at once, Rubisco activation and stomata within minutes; Lambers,
    Chapin & Pons 2008, Plant Physiological Ecology, ch. 2 (m)), and the tower sees
    the flux of its footprint within a minute or two of transport, both far shorter
    than a 30- or 60-minute record. The change of NEE from one record to the next
    therefore correlates (negatively: more light, more uptake) with the change of Rg
    of the same records more than with that of records before or after; a passing
    cloud moves both at once. Where the correlation with Rg changes ``k`` records
    earlier or later is clearly stronger (its Fisher z larger by 3 standard errors,
    sqrt(2 / (n - 3)) each, within two hours either way), the NEE column is named as
    shifted: an end-stamped flux file joined with a start-stamped weather file reads
    like this. First differences leave out the smooth diurnal course, whose
    afternoon depression (VPD) would pull a lag of the raw series.

    Only the cloud-driven part of Rg's change counts (:func:`_cloud_changes`, since
    round falsealarm54): under a sky clear or evenly overcast all day Rg's changes are
    the daily course's alone, and an NEE that follows temperature (respiration, a
    desert's heat-limited uptake), whose daily maximum trails the sun's by 1-2 h
    (Campbell & Norman 1998, ch. 2 (m)), matched that course records late or early
    (two invented deserts, 4-5 standard errors). The change of Rg's ratio to the site's
    clear-sky course (Haurwitz's, bent to the site by sun height) is taken on pairs of
    records of which one is under cloud; a site-year with too few such pairs (below
    500) is not judged.

    Each change, of NEE and of the cloud-driven part, is taken less its mean at that time
    of day over the 31 days centred on its day (:func:`_less_daily_course`, since round
    lag56): convective cloud that builds at the same hour on most days (over tropical and
    monsoon land thunderstorms peak in the afternoon; Dai 2001 (m)) gives the cloud-driven
    changes a daily course again, and an NEE following temperature matched it two
    records early at an invented desert and savanna with afternoon cloud on 70 % of days.
    A clock shift moves NEE against the day-to-day changes of cloud, which a recurring
    course does not have; the uptake a cloud moves stays in the same record. Without
    the daily course most of NEE's change at a site of little uptake is noise, and the
    changes of one record to the next are serially correlated (-0.5 at one record for
    white noise, in both series): the pairs are not independent, and the bound of 3
    standard errors is taken in Bartlett's standard error of a cross-correlation
    (:func:`_serial_inflation`, some 1.2 times sqrt(2 / (n - 3)); Box, Jenkins & Reinsel
    2008, ch. 11 (m)), which the message states.

    References
    ----------
    Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology,
    2nd ed. Springer, ch. 2 (m).
    Haurwitz, B. (1945). Insolation in relation to cloudiness and cloud density. Journal
    of Meteorology, 2, 154-166 (m).
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 2 (m).
    Dai, A. (2001). Global precipitation and thunderstorm frequencies. Part II: Diurnal
    variations. Journal of Climate, 14, 1112-1128 (m).
    Box, G. E. P., Jenkins, G. M., & Reinsel, G. C. (2008). Time Series Analysis:
    Forecasting and Control, 4th ed. Wiley, ch. 11 (m).
    """
    arrays = _light_arrays(nee, rg, potential, interval_minutes)
    if arrays is None:
        return None
    nee, rg, potential = arrays
    most = max(1, int(_MAX_SHIFT_MINUTES // interval_minutes))
    # each change less its mean at that time of day: a cloud that comes at the same hour
    # every day, and NEE's daily course, out
    per_day = _records_per_day(interval_minutes)
    d_nee, d_cloud = (_less_daily_course(values, per_day)
                      for values in _cloud_changes(nee, rg, potential))
    scores = _change_scores(d_nee, d_cloud, {k: k for k in range(-most, most + 1)})
    inflation = _serial_inflation(d_nee, d_cloud)
    found = _decide(scores, _LAG_STANDARD_ERRORS * inflation)
    if found is None:
        return None
    best, strength, same, apart = found
    apart /= inflation
    names = columns or {}
    minutes = abs(best) * interval_minutes
    later = "later" if best > 0 else "earlier"
    return (f"NEE (column {names.get('nee', 'nee')!r}) changes with Rg (column "
            f"{names.get('rg', 'rg')!r}) {abs(best)} record(s) ({minutes:g} min) {later} "
            f"than the same record (correlation of the changes under cloud, each less its mean "
            f"at that time of day, {strength:.2f} there, {same:.2f} in the same record, "
            f"{apart:.0f} standard errors apart): photosynthesis follows light within minutes, "
            "so the "
            f"NEE column looks shifted by {abs(best)} record(s) against the drivers (a "
            "flux file stamped at interval ends joined with a weather file stamped at "
            "starts reads like this); align the columns in a copy of the file")


#: The widest shift in hours looked for between NEE and Rg beyond :func:`nee_lag`'s two:
#: 14 h either way, the widest difference between a local standard time and UTC (the
#: offsets of the IANA time-zone database, which Python's zoneinfo reads, run from
#: UTC-12 to UTC+14; fact of the trade): a flux file on UTC joined with a weather file
#: on local time, or the reverse, lies that offset apart.
_MAX_SHIFT_HOURS = 14


def nee_hour_shift(nee, rg, potential, interval_minutes: float, columns=None) -> str | None:
    """A message where NEE follows Rg by more than two hours, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    potential : array_like
        Potential radiation of each record [W m-2]; only changes between two records
        with the sun up count.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where no shift beyond two hours (up to
        :data:`_MAX_SHIFT_HOURS` either way) correlates clearly best (the shifts of up
        to two hours are :func:`nee_lag`'s).

    Notes
    -----
    :func:`nee_lag`'s argument over the shifts a time zone makes: photosynthesis
    follows a change of light within minutes (Lambers, Chapin & Pons 2008, ch. 2 (m)),
    so the record-to-record changes of NEE correlate (negatively) most strongly with
    the changes of Rg of the same records. A flux file written on UTC and joined by
    stamp with a weather file on local time (a flux computer and a data logger set to
    different clocks) puts NEE the UTC offset away from its light: on the example site
    (UTC+1) the NEE 5 h late moved nighttime GPP by -815 g C m-2 and NEE by -110, 8 h
    early GPP by -946, named only as a shift of two hours (the widest looked for) or
    as a sign changed in some months, and 12 h late was refused as NEP. Two rules
    decide together: the best shift's correlation exceeds the same record's by 3
    standard errors of Fisher's z (:func:`nee_lag`'s rule), and it exceeds that of
    the same shift one day earlier and one day later by as much. The second rule is
    the clouds': a shift of the diurnal course alone (a column of the opposite sign
    matches the light's course half a day away; an afternoon depression of uptake
    hours away) repeats a day on, a passing cloud does not (:func:`nee_day_shift`).

    References
    ----------
    Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology,
    2nd ed. Springer, ch. 2 (m).
    """
    arrays = _light_arrays(nee, rg, potential, interval_minutes)
    if arrays is None:
        return None
    nee, rg, potential = arrays
    near = max(1, int(_MAX_SHIFT_MINUTES // interval_minutes))
    if int(_MAX_SHIFT_HOURS * 60 // interval_minutes) <= near:
        return None
    found = _best_shift(nee, rg, potential, interval_minutes, _MIN_PAIRS)
    if found is None or abs(found[0]) <= near:
        return None
    best, strength, same, apart = found
    names = columns or {}
    hours = abs(best) * interval_minutes / 60.0
    later = "later" if best > 0 else "earlier"
    return (f"NEE (column {names.get('nee', 'nee')!r}) changes with Rg (column "
            f"{names.get('rg', 'rg')!r}) {abs(best)} record(s) ({hours:g} h) {later} than "
            f"the same record (correlation of the sunlit changes {strength:.2f} there, "
            f"{same:.2f} in the same record, {apart:.0f} standard errors apart, and clearly "
            "above the same shift a day on either side, as a passing cloud's): "
            "photosynthesis follows light within minutes, so the NEE column looks "
            f"{hours:g} h off the drivers (a flux file on UTC joined with a weather file on "
            "local time, or the reverse, reads like this); put both files on one clock in a "
            "copy of the file")


def _sunlit_changes(nee, rg, potential) -> tuple[np.ndarray, np.ndarray]:
    """The changes of NEE and Rg from each record to the next, Rg's NaN unless the sun is
    up at both records."""
    d_nee, d_rg = np.diff(nee), np.diff(rg)
    sunlit = (potential[1:] > 0) & (potential[:-1] > 0)
    return d_nee, np.where(sunlit, d_rg, np.nan)


def _shift_pairs(d_nee, d_rg, k: int) -> tuple[np.ndarray, np.ndarray]:
    """The change of NEE k records on (a) beside that of Rg (b), pair by pair."""
    return (d_nee[k:], d_rg[:d_rg.size - k]) if k >= 0 else (d_nee[:k], d_rg[-k:])


def _best_shift(nee, rg, potential, interval_minutes: float, minimum: int):
    """(k, strength, same, apart) of the shift within :data:`_MAX_SHIFT_HOURS` whose sunlit
    changes correlate clearly best (:func:`_decide`) and beat the same shift a day on either
    side by as much (a passing cloud's), or None."""
    d_nee, d_rg = _sunlit_changes(nee, rg, potential)

    def score(k):
        if abs(k) >= d_nee.size:
            return math.nan, 0
        r, count = _correlation(*_shift_pairs(d_nee, d_rg, k), minimum)
        return -r, count

    return _best_of(score, interval_minutes)


def _best_of(score, interval_minutes: float, scores=None):
    """:func:`_best_shift`'s rule on `score(k)` -> (correlation signed to be positive where
    physical, pairs) of each shift k [records]; `scores`: ``{k: score(k)}`` of the shifts
    within :data:`_MAX_SHIFT_HOURS`, where the caller has them."""
    most = int(_MAX_SHIFT_HOURS * 60 // interval_minutes)
    per_day = _records_per_day(interval_minutes)
    if scores is None:
        scores = {k: score(k) for k in range(-most, most + 1)}
    scores = {k: s for k, s in scores.items() if math.isfinite(s[0])}
    if 0 not in scores or len(scores) < 2:
        return None
    found = _decide(scores)
    if found is None:
        return None
    best, strength = found[0], found[1]
    z_best = math.atanh(min(strength, 0.999999))
    for k in (best - per_day, best + per_day):
        other, count = score(k)
        if not math.isfinite(other):
            continue
        error = math.sqrt(2.0 / (min(count, scores[best][1]) - 3))
        if z_best - math.atanh(max(min(other, 0.999999), -0.999999)) <= (
                _LAG_STANDARD_ERRORS * error):
            return None
    return found


def _stretch_scores(d_nee, d_rg, firsts: np.ndarray, minimum: int):
    """`score(k, m)`: :func:`_best_shift`'s score of shift k over the records from
    ``firsts[m]`` to the end, from each month's sums of the pairs' moments (one pass per
    shift, not one per shift and month: a ten-year record has 120 stretches)."""
    cache = {}
    # once for every shift: which changes are finite, and the month of each pair position
    # (the same masks and numbers a shift's own pass took, round speed61)
    finite_nee, finite_rg = np.isfinite(d_nee), np.isfinite(d_rg)
    month_of = np.searchsorted(firsts, np.arange(d_nee.size), side="right")

    def suffix_moments(k):
        if k not in cache:
            a, b = _shift_pairs(d_nee, d_rg, k)
            # the finite pairs only (night changes are NaN): the others would add +0.0 to
            # each sum, which changes no bit of a sum that starts at +0.0
            ok = np.flatnonzero(np.logical_and(*_shift_pairs(finite_nee, finite_rg, k)))
            a, b = a[ok], b[ok]
            month = month_of[ok]
            # the pair counts as integers (whole numbers: the float sums of ones, exactly)
            sums = np.stack([np.bincount(month, minlength=firsts.size + 1),
                             *(np.bincount(month, weights=w, minlength=firsts.size + 1)
                               for w in (a, b, a * a, b * b, a * b))], dtype=float)
            # the sums over the pairs from each month's first record on
            cache[k] = np.cumsum(sums[:, ::-1], axis=1)[:, ::-1]
        return cache[k]

    def score(k, m):
        if abs(k) >= d_nee.size:
            return math.nan, 0
        n, sa, sb, saa, sbb, sab = suffix_moments(k)[:, m + 1]
        count = int(round(n))
        if count < minimum:
            return math.nan, count
        sxx, syy, sxy = saa - sa * sa / n, sbb - sb * sb / n, sab - sa * sb / n
        scale = math.sqrt(max(sxx, 0.0) * max(syy, 0.0))
        return (-sxy / scale if scale > 0 else math.nan), count

    def month_scores(shifts):
        """Per month m, ``{k: score(k, m)}`` of the shifts `shifts`: the same arithmetic
        on every (shift, month) at once (element-wise float64, so the same bits as
        Python's floats), not a Python call per pair (round speed61)."""
        inside = [k for k in shifts if abs(k) < d_nee.size]
        if not inside:
            return [{k: (math.nan, 0) for k in shifts} for _ in range(firsts.size)]
        n, sa, sb, saa, sbb, sab = np.stack([suffix_moments(k)[:, 1:]
                                             for k in inside], axis=1)
        count = np.rint(n).astype(np.int64)       # round half to even, as Python's round
        with np.errstate(invalid="ignore", divide="ignore"):
            sxx, syy, sxy = saa - sa * sa / n, sbb - sb * sb / n, sab - sa * sb / n
            scale = np.sqrt(np.maximum(sxx, 0.0) * np.maximum(syy, 0.0))
            r = np.where(scale > 0, -sxy / scale, np.nan)
        r[count < minimum] = np.nan
        row = {k: i for i, k in enumerate(inside)}
        r, count = r.tolist(), count.tolist()
        return [{k: (r[row[k]][m], count[row[k]][m]) if k in row else (math.nan, 0)
                 for k in shifts} for m in range(firsts.size)]

    return score, month_scores


#: Sunlit pairs a stretch from a month on needs to be judged: a month's (``_MONTH_PAIRS``
#: is 100) three times over. Our choice.
_STRETCH_PAIRS = 300


def nee_shift_from_month(nee, rg, potential, stamps, interval_minutes: float,
                         columns=None) -> str | None:
    """A message where NEE follows Rg shifted from some month on only, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    potential : array_like
        Potential radiation of each record [W m-2].
    stamps : pandas.DatetimeIndex
        Interval starts of the records.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where no month's first day starts a stretch to the record's
        end whose best shift is another than the records' before it.

    Notes
    -----
    :func:`nee_hour_shift`'s two rules (the sunlit changes of NEE and Rg correlate best
    in the same record, Lambers, Chapin & Pons 2008 (m); a shift found must beat the same
    shift a day on either side, as a passing cloud's change) applied to the records from
    each month's first day to the end, and to those before it: a flux computer replaced
    or reset mid-year (another clock, UTC against local time, end against start stamps)
    shifts NEE from then on only, and over the whole record the months before it dilute
    the shift below the rule. The first month whose stretch to the end is shifted while
    the records before it are not is named. On the example site NEE two hours late from
    October moved NEE by -12.6, nighttime GPP by -50.1 and Reco by -62.7 g C m-2 without a
    word (round mistakes23).

    References
    ----------
    Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology,
    2nd ed. Springer, ch. 2 (m).
    """
    arrays = _light_arrays(nee, rg, potential, interval_minutes, stamps)
    if arrays is None:
        return None
    nee, rg, potential = arrays
    stamps = pd.DatetimeIndex(stamps)
    # the calendar month of each stamp as one number (the same changes as its "YYYY-MM"
    # label, a tenth of the cost)
    months = stamps.year.to_numpy() * 12 + stamps.month.to_numpy()
    firsts = np.flatnonzero(months[1:] != months[:-1]) + 1
    chosen = None
    d_nee, d_rg = _sunlit_changes(nee, rg, potential)
    stretch, month_scores = _stretch_scores(d_nee, d_rg, firsts, _STRETCH_PAIRS)
    most = int(_MAX_SHIFT_HOURS * 60 // interval_minutes)
    shifted = month_scores(range(-most, most + 1))
    for m, first in enumerate(firsts.tolist()):
        after = _best_of(lambda k, m=m: stretch(k, m), interval_minutes, shifted[m])
        if after is None:
            continue
        k = after[0]
        # the records before: the same record clearly better than that shift
        head = _change_scores(d_nee[:first - 1], d_rg[:first - 1], {0: 0, k: k})
        (r_zero, n_zero), (r_k, n_k) = head[0], head[k]
        if min(n_zero, n_k) < _STRETCH_PAIRS or not (math.isfinite(r_zero)
                                                     and math.isfinite(r_k)):
            continue
        error = math.sqrt(2.0 / (min(n_zero, n_k) - 3))
        clamp = lambda r: math.atanh(max(min(r, 0.999999), -0.999999))  # noqa: E731
        before = (clamp(r_zero) - clamp(r_k)) / error
        if before <= _LAG_STANDARD_ERRORS:
            continue
        if chosen is None or after[3] + before > chosen[1]:
            chosen = (first, after[3] + before, after)
    if chosen is not None:
        first, _, (best, strength, same, apart) = chosen
        names = columns or {}
        minutes = abs(best) * interval_minutes
        later = "later" if best > 0 else "earlier"
        return (f"NEE (column {names.get('nee', 'nee')!r}) changes with Rg (column "
                f"{names.get('rg', 'rg')!r}) {abs(best)} record(s) ({minutes:g} min) {later} "
                f"than the same record from {stamps[first]:%Y-%m} on (correlation of the sunlit "
                f"changes {strength:.2f} there, {same:.2f} in the same record, {apart:.0f} "
                "standard errors apart, and clearly above the same shift a day on either "
                "side), not before: photosynthesis follows light within minutes, so the NEE "
                f"column looks shifted from {stamps[first]:%Y-%m} on (a flux computer replaced or "
                "reset to another clock, or to stamps at the other end of the interval); "
                "align those records in a copy of the file")
    return None


#: The widest shift in whole days looked for between NEE and Rg (a month either way: a
#: file of another month is a wrong file rather than a shifted one). Our choice.
_MAX_SHIFT_DAYS = 31


def nee_day_shift(nee, rg, potential, interval_minutes: float, columns=None) -> str | None:
    """A message where NEE follows Rg by whole days, or by a day and a few records, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    potential : array_like
        Potential radiation of each record [W m-2]; only changes between two records
        with the sun up count.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the changes of NEE and Rg of the same day correlate
        best (or too few sunlit pairs, or too weak a correlation to tell).

    Notes
    -----
    The argument of :func:`nee_lag` over whole days: a shift of the weather record by
    whole days keeps the diurnal course of Rg in step with the NEE's, so the clock
    check and the shift of up to two hours see nothing, but the clouds of one day no
    longer pass over the other day's flux. The correlation of the record-to-record
    changes of NEE and Rg then holds the shared diurnal shape only, while at the true
    alignment a cloud's change of light and the uptake it changes fall into the same
    record (Lambers, Chapin & Pons 2008, ch. 2 (m)). The shifts compared are ``d`` days
    (``d`` from 1 to :data:`_MAX_SHIFT_DAYS` either way) and, beside each, ``d`` days and
    up to :data:`_MAX_SHIFT_MINUTES` of records either way (since leftovers57: a day of
    year counted from 0 in a flux file stamped at interval ends joined with weather
    stamped at starts is a day and a record apart, 49 or 47 records at 30 min, which
    neither a whole day nor :func:`nee_hour_shift`'s 14 h reaches). Where the changes of
    Rg at one of them correlate with those of NEE clearly more strongly than those of the
    same record (Fisher z larger by Bonferroni's bound for the shifts compared,
    :func:`_family_bound`, in standard errors sqrt(2 / (n - 3)): 4.1 for the 62 whole
    days, judged first and as before; where none passes, the best shift of all, a day and
    some records, must pass 4.5 for the 496 such shifts of 30-minute records, 4.4 for
    the 248 of hourly ones, so each family keeps the chance alarm of one test at 3
    standard errors and the two together twice that, and beat the same records a day on
    either side by 3, :func:`_beats_the_days_beside`: an NEE whose daily course trails
    the sun's matches every day those records off), the two records are named as that
    far apart: a day of year counted from 0 in one file and from 1 in the other, or a
    weather file of other dates joined by stamp. On the example site the weather a day
    late moved GPP by -55 and Reco by -47 g C m-2 and doubled the stated NEE
    uncertainty without a word; ten days late moved GPP by -127 g C m-2. Where a shift of
    a few records within the day correlates at least as well as the best day's, the
    record's shift is named instead (:func:`_record_rival`): NEE a record off that
    :func:`nee_lag` left unnamed.

    References
    ----------
    Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology,
    2nd ed. Springer, ch. 2 (m).
    Dunn, O. J. (1961). Multiple comparisons among means. Journal of the American
    Statistical Association, 56, 52-64 (m).
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 2 (m).
    """
    arrays = _light_arrays(nee, rg, potential, interval_minutes)
    if arrays is None:
        return None
    nee, rg, potential = arrays
    per_day = _records_per_day(interval_minutes)
    most = max(1, int(_MAX_SHIFT_MINUTES // interval_minutes))
    shifts = {days * per_day + records: days * per_day + records
              for days in range(-_MAX_SHIFT_DAYS, _MAX_SHIFT_DAYS + 1)
              for records in (range(-most, most + 1) if days else (0,))
              if abs(days * per_day + records) < nee.size - 1}
    d_nee, d_rg = _sunlit_changes(nee, rg, potential)
    scores = _judged_change_scores(d_nee, d_rg, {k: k for k in shifts if k % per_day == 0})
    scores = {k: score for k, score in scores.items() if math.isfinite(score[0])}
    if 0 not in scores:
        return None
    # the best of up to 62 whole days against the same record: each one more draw of the
    # noise, so Bonferroni's bound for the shifts compared (falsealarm53)
    found = _decide(scores, _family_bound(len(scores) - 1)) if len(scores) > 1 else None
    if found is None:
        # then a day and a few records (leftovers57), Bonferroni's bound for those shifts:
        # the whole days decide as before, a day and a record is named where none does.
        # The 496 shifts' correlations from their moments at once (_moment_change_scores),
        # the best one's then from its sums of products, as every other shift's here
        extra = _moment_change_scores(d_nee, d_rg, [k for k in shifts if k % per_day])
        extra = {k: score for k, score in extra.items() if math.isfinite(score[0])}
        bound = _family_bound(len(extra))
        found = _decide({**scores, **extra}, bound)
        if found is None or found[0] % per_day == 0:
            return None
        scores |= _judged_change_scores(d_nee, d_rg, {found[0]: found[0]})
        found = _decide({0: scores[0], found[0]: scores[found[0]]}, bound)
        if found is None or not _beats_the_days_beside(found, d_nee, d_rg, per_day, scores):
            return None
    best, strength, same, apart = found
    names = columns or {}
    records = _record_rival(d_nee, d_rg, interval_minutes, strength)
    if records is not None:
        return _record_shift_text(records, strength, best, same, interval_minutes, names)
    later = "later" if best > 0 else "earlier"
    span = _days_and_records(best, interval_minutes)
    if best % per_day == 0:
        apart_words = "whole days apart (a day of year counted from 0 in one file and from 1 in "
        apart_words += "the other, or a weather file of other dates)"
    else:
        apart_words = f"that far apart ({_day_and_record_causes(best, interval_minutes)})"
    return (f"NEE (column {names.get('nee', 'nee')!r}) changes with Rg (column "
            f"{names.get('rg', 'rg')!r}) {span} {later} than the same record "
            f"(correlation of the sunlit changes {strength:.2f} there, {same:.2f} in the same "
            f"record, {apart:.0f} standard errors apart): a cloud changes light and uptake "
            f"in the same record, so the flux and the weather records look {apart_words}; "
            "align them in a copy of the file")


def _beats_the_days_beside(found, d_nee, d_rg, per_day: int, scores: dict) -> bool:
    """Whether the best shift of a day and some records (`found`, :func:`_decide`'s) beats
    the same records a day on either side by :data:`_LAG_STANDARD_ERRORS` standard errors
    of Fisher's z, as a passing cloud's change does (:func:`_best_of`'s rule).

    A whole day keeps the daily course of Rg in step with NEE's; a day and some records
    does not: an NEE whose daily course trails the sun's (respiration following the air's
    temperature, whose daily maximum trails the sun's by 1-3 h: Campbell & Norman 1998,
    ch. 2 (m)) matches Rg's course those records off on every day alike, the clouds only
    at the one true shift."""
    best, strength, _, _ = found
    count = scores[best][1]
    beside = {k: k for k in (best - per_day, best + per_day) if k not in scores}
    known = {**scores, **_judged_change_scores(d_nee, d_rg, beside)}
    z_best = math.atanh(min(strength, 0.999999))
    for k in (best - per_day, best + per_day):
        other, other_count = known[k]
        if not math.isfinite(other) or min(count, other_count) <= 3:
            continue
        error = math.sqrt(2.0 / (min(count, other_count) - 3))
        if z_best - math.atanh(max(min(other, 0.999999), -0.999999)) <= (
                _LAG_STANDARD_ERRORS * error):
            return False
    return True


def _day_and_record_causes(shift: int, interval_minutes: float) -> str:
    """The usual causes of a shift of a day and some records, each part named only where
    it fits: a day of year counted from 0 in one file and from 1 in the other moves one
    day, other dates any number; stamps at the interval's end in one file and its start in
    the other move one record, clocks set apart any number (review79: "1 day(s) and 2
    record(s)" and "2 day(s) and 3 record(s)" were given the one-day, one-record causes)."""
    per_day = _records_per_day(interval_minutes)
    days = int(round(abs(shift) / per_day))
    records = abs(abs(shift) - days * per_day)
    day = ("a day of year counted from 0 in one file and from 1 in the other" if days == 1
           else "a weather file of other dates joined by stamp")
    record = ("stamps at the interval's end in one and its start in the other" if records == 1
              else f"clocks {records * interval_minutes:g} min apart in the two files")
    return f"{day}, and {record}"


def _days_and_records(shift: int, interval_minutes: float) -> str:
    """A shift of records in words: "2 day(s)", "1 day(s) and 1 record(s) (24.5 h)" or
    "1 day(s) less 1 record(s) (23.5 h)" (the nearest whole days, then the records)."""
    per_day = _records_per_day(interval_minutes)
    days = int(round(abs(shift) / per_day))
    records = abs(shift) - days * per_day
    if records == 0:
        return f"{days} day(s)"
    hours = abs(shift) * interval_minutes / 60.0
    return (f"{days} day(s) {'and' if records > 0 else 'less'} {abs(records)} record(s) "
            f"({hours:g} h)")


#: Words of :func:`nee_day_shift`'s message where a record's shift beats the days' (the
#: preflight files it with the record shifts).
RECORD_SHIFT_WORDS = "not by whole days"


def _record_rival(d_nee, d_rg, interval_minutes: float, day_strength: float):
    """(k, correlation) of the shift of a few records within the same day whose sunlit
    changes correlate at least as well as the best whole-day shift's (`day_strength`),
    or None.

    Whole days apart, the clouds of one day pass over the other's flux only at that
    shift: every shift of a few records within the day holds the shared diurnal shape
    alone, as the other day shifts do, and falls below it. NEE a record off holds the
    clouds at that record's shift, and its same-record changes lose them (the changes of
    unrelated clouds at one record's distance correlate negatively): the shared shape of
    some day shift then beats the same record, and the record's shift beats them all
    (round leftovers56: NEE one record off at the invented Sahel site w04 was named
    "9 days later"). Shifts of up to :data:`_MAX_SHIFT_MINUTES` are compared, those of
    :func:`nee_lag`.
    """
    most = max(1, int(_MAX_SHIFT_MINUTES // interval_minutes))
    scores = _change_scores(d_nee, d_rg, {k: k for k in range(-most, most + 1) if k})
    finite = {k: score for k, score in scores.items() if math.isfinite(score[0])}
    if not finite:
        return None
    k = max(finite, key=lambda key: finite[key][0])
    return (k, finite[k][0]) if finite[k][0] >= day_strength else None


def _record_shift_text(records, day_strength, shift, same, interval_minutes, names) -> str:
    """The warning of NEE a few records off its light where a shift of days (`shift`
    records) scored."""
    k, strength = records
    later = "later" if k > 0 else "earlier"
    return (f"NEE (column {names.get('nee', 'nee')!r}) changes with Rg (column "
            f"{names.get('rg', 'rg')!r}) {abs(k)} record(s) ({abs(k) * interval_minutes:g} "
            f"min) {later} than the same record (correlation of the sunlit changes "
            f"{strength:.2f} there, {same:.2f} in the same record; {day_strength:.2f} "
            f"{_days_and_records(shift, interval_minutes)} "
            f"{'later' if shift > 0 else 'earlier'}, the diurnal shape "
            "alone): photosynthesis follows light within minutes, so the NEE column looks "
            f"shifted by {abs(k)} record(s) against the drivers, {RECORD_SHIFT_WORDS} (a flux "
            "file stamped at interval ends joined with a weather file stamped at starts "
            "reads like this); align the columns in a copy of the file")


def months_rising_with_light(nee, rg, potential, stamps, columns=None) -> str | None:
    """A message naming months whose NEE rises with light while other months' falls.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    potential : array_like
        Potential radiation of each record [W m-2]; only changes between two records
        with the sun up count.
    stamps : pandas.DatetimeIndex
        Interval starts of the records (the months).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text, or None where no month's NEE clearly rises with light or no
        month's clearly falls with it.

    Notes
    -----
    Photosynthesis follows light within minutes (see :func:`nee_lag`), so in a month of
    active vegetation the changes of NEE from record to record correlate negatively with
    those of Rg (a cloud passing: less light, less uptake, NEE up). A month whose
    correlation is clearly positive (above 0.2 and 3 standard errors of Fisher's z,
    sqrt(1 / (n - 3)), above 0, raised for the number of periods judged by Bonferroni's
    bound (:func:`_family_bound`): 3.7 for 12 months, 4.0 for 52 weeks) in a record holding clearly negative months as well has
    NEE of the opposite sign there: a sign convention that changed within the record
    (a new logger program, a second processing's file). The whole record of the
    opposite sign is the reader's refusal (:mod:`fluxpart.unit_checks`). Where no month
    is named, blocks of 7 days counted from the record's first day are judged the same
    way (since mistakes17): a sign flipped for 10 days of May left May's correlation
    diluted by its other days and moved the example's annual NEE by +118 g C m-2 without
    a word; a week has the sunlit pairs a month needs. A month without
    photosynthesis whose respiration follows the sunlit surface's temperature within a
    record (a rain pulse on bare, dark soil (m)) could rise with light too, which is one
    reason this only warns.

    References
    ----------
    Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology,
    2nd ed. Springer, ch. 2 (m).
    """
    arrays = _light_arrays(nee, rg, potential, stamps=stamps)
    if arrays is None:
        return None
    nee, rg, potential = arrays
    d_nee, d_rg = np.diff(nee), np.diff(rg)
    usable = ((potential[1:] > 0) & (potential[:-1] > 0) & np.isfinite(d_nee)
              & np.isfinite(d_rg))
    index = pd.DatetimeIndex(stamps[1:])
    months = index.year.to_numpy() * 12 + index.month.to_numpy() - 1
    rising, falling = _clear_responses(d_nee, d_rg, usable, months)
    what = "month(s)"
    if rising and falling:
        shown = ", ".join(f"{code // 12:04d}-{code % 12 + 1:02d} ({r:+.2f})"
                          for code, r in rising)
    else:
        # a sign changed for days to weeks within a month (since mistakes17): the same
        # test on blocks of _SIGN_BLOCK_DAYS, counted from the record's first day
        days = ((index.normalize() - index[0].normalize()) // pd.Timedelta(days=1)).to_numpy()
        blocks = days // _SIGN_BLOCK_DAYS
        rising, falling = _clear_responses(d_nee, d_rg, usable, blocks)
        if not rising or not falling:
            return None
        first = index[0].normalize()
        shown = ", ".join(
            f"{(first + pd.Timedelta(days=int(code) * _SIGN_BLOCK_DAYS)):%Y-%m-%d} .. "
            f"{(first + pd.Timedelta(days=int(code) * _SIGN_BLOCK_DAYS + _SIGN_BLOCK_DAYS - 1)):%Y-%m-%d}"
            f" ({r:+.2f})" for code, r in rising)
        what = f"{_SIGN_BLOCK_DAYS}-day stretch(es)"
    return (f"NEE (column {(columns or {}).get('nee', 'nee')!r}) rises with light in "
            f"{len(rising)} {what}: {shown} (correlation of the sunlit changes of NEE and "
            f"Rg), where {len(falling)} other {what} show the uptake that light brings "
            "within minutes (a negative correlation): NEE there looks of the opposite sign "
            "(a sign convention changed within the record); check the column and flip "
            f"those {'months' if what == 'month(s)' else 'days'} in a copy of the file")


def _family_bound(periods: int) -> float:
    """Standard errors of Fisher's z a period's correlation must pass when `periods` are
    judged: the Bonferroni bound that keeps the chance of any period of no light
    response passing at that of one test at :data:`_LAG_STANDARD_ERRORS` (falsealarm52).

    Each period judged is one more draw of the noise: 52 dormant weeks tested at 3
    standard errors (two-sided 0.27 % each) pass one by chance in 13 % of the years
    (1 - 0.9973^52). Bonferroni (Dunn 1961, J. Am. Stat. Assoc. 56: 52-64 (m)); 12
    months need 3.7 standard errors, 52 weeks 4.0. A flipped sign of an active canopy
    gives correlations of 0.4 or more over a week's 100-300 sunlit pairs (6-10 standard
    errors), far beyond either.
    """
    single = 2 * NormalDist().cdf(-_LAG_STANDARD_ERRORS)
    return max(_LAG_STANDARD_ERRORS, NormalDist().inv_cdf(1 - single / (2 * max(periods, 1))))


def _clear_responses(d_nee, d_rg, usable, codes) -> tuple[list, list]:
    """The periods (`codes`) whose sunlit NEE changes correlate clearly positively and
    clearly negatively with those of Rg: lists of (code, correlation), each past the
    family bound of the periods judged (:func:`_family_bound`)."""
    judged = []
    # each period's pairs in time order by one sort, not one pass per period (_groups)
    for code, chosen in group_positions(codes, usable).items():
        count = int(chosen.size)
        if count < _MONTH_PAIRS:
            continue
        r, _ = _correlation(d_nee[chosen], d_rg[chosen], _MONTH_PAIRS)
        if math.isfinite(r):
            judged.append((int(code), r, count))
    bound = _family_bound(len(judged))
    rising, falling = [], []
    for code, r, count in judged:
        if abs(r) < _CLEAR_RESPONSE or abs(math.atanh(r)) * math.sqrt(count - 3) <= bound:
            continue
        (rising if r > 0 else falling).append((code, r))
    return rising, falling
