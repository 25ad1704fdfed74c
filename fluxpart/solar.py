"""Solar geometry: sun elevation, potential (top-of-atmosphere) radiation, night.

All functions take timestamps in the site's local standard time (tz-naive, no
daylight saving) and the site's longitude and UTC offset, and work on whole
arrays at once. Solar declination, right ascension (hence the equation of
time) and the Earth–Sun distance follow the Astronomical Almanac's approximate
solar position as published by Michalsky (1988); the hour angle comes from local
standard time converted to UTC, the longitude and the sidereal time.

References
----------
Michalsky, J. J. (1988). The Astronomical Almanac's algorithm for approximate
solar position (1950–2050). Solar Energy 40(3):227–235.
doi:10.1016/0038-092X(88)90045-X
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .constants import SECONDS_PER_DAY, SOLAR_CONSTANT
from .errors import ConfigError, LengthMismatchError, SpacingError, TimestampError

__all__ = [
    "forget_courses",
    "interval_midpoint_elevation",
    "interval_sun",
    "night_mask",
    "potential_at_latitude",
    "potential_radiation",
    "solar_geometry",
    "sun_elevation",
]

_MINUTES_PER_DAY = SECONDS_PER_DAY // 60
# Julian day of 1970-01-01 00:00 UT and of the epoch J2000.0 (2000-01-01 12:00)
# [d]; Astronomical Almanac.
_UNIX_EPOCH_JULIAN_DAY = 2440587.5
_J2000_JULIAN_DAY = 2451545.0


def _as_datetime64(times, what: str = "times") -> np.ndarray:
    """Return tz-naive instants as ``datetime64[s]``, rejecting bad input clearly."""
    if isinstance(times, (pd.DatetimeIndex, pd.Series)):
        values = times
    else:
        values = np.asarray(times)
        if values.ndim != 1:
            raise TimestampError(f"{what}: expected a one-dimensional sequence of instants, "
                                 f"got an array of shape {values.shape}")
        if not np.issubdtype(values.dtype, np.datetime64):
            try:
                values = pd.DatetimeIndex(values)
            except (TypeError, ValueError) as error:
                raise TimestampError(f"{what}: cannot read the values as instants ({error}); "
                                     "pass a pandas DatetimeIndex in local standard time"
                                     ) from None
    if isinstance(values, pd.Series):
        if not isinstance(values.dtype, pd.DatetimeTZDtype) and not np.issubdtype(
                values.dtype, np.datetime64):
            raise TimestampError(f"{what}: expected datetimes, got dtype {values.dtype}")
    tz = getattr(getattr(values, "dt", values), "tz", None)
    if tz is not None:
        raise TimestampError(f"{what}: the instants carry the time zone {tz}; fluxpart expects "
                             "tz-naive local standard time plus the site's utc_offset (use "
                             ".tz_convert(fixed offset).tz_localize(None))")
    out = np.asarray(values, dtype="datetime64[s]")
    if np.isnat(out).any():
        row = int(np.flatnonzero(np.isnat(out))[0])
        raise TimestampError(f"{what}: row {row} is not a valid instant (NaT)")
    return out


def _check_location(latitude, longitude, utc_offset) -> None:
    for key, value, low, high in (("latitude", latitude, -90.0, 90.0),
                                  ("longitude", longitude, -180.0, 180.0),
                                  ("utc_offset", utc_offset, -12.0, 14.0)):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.floating,
                                                             np.integer)):
            raise ConfigError(f"[site] {key} = {value!r} is not a number")
        if not np.isfinite(value) or not low <= value <= high:
            raise ConfigError(f"[site] {key} = {value!r} is out of range; "
                              f"expected a value in [{low:g}, {high:g}]")


def _utc_seconds(times, utc_offset) -> np.ndarray:
    """Seconds since 1970-01-01 00:00 UTC of local-standard-time instants [s]."""
    local = (times - np.datetime64(0, "s")).astype(np.float64)
    return local - utc_offset * 3600.0


def _solar_coordinates(utc_seconds, longitude):
    """Declination [rad], hour angle in [-π, π) [rad] and (r0/r)^2 [1] of the sun.

    The Astronomical Almanac's approximate solar position as given by Michalsky
    (1988), in days ``n`` from J2000.0 (2000-01-01 12:00 UT), so leap years and
    multi-year records need no special case.
    """
    n = utc_seconds / SECONDS_PER_DAY + (_UNIX_EPOCH_JULIAN_DAY - _J2000_JULIAN_DAY)
    mean_longitude = np.radians(np.mod(280.460 + 0.9856474 * n, 360.0))
    mean_anomaly = np.radians(np.mod(357.528 + 0.9856003 * n, 360.0))
    ecliptic_longitude = (mean_longitude + np.radians(1.915) * np.sin(mean_anomaly)
                          + np.radians(0.020) * np.sin(2.0 * mean_anomaly))
    obliquity = np.radians(23.439 - 0.0000004 * n)
    right_ascension = np.arctan2(np.cos(obliquity) * np.sin(ecliptic_longitude),
                                 np.cos(ecliptic_longitude))
    declination = np.arcsin(np.sin(obliquity) * np.sin(ecliptic_longitude))
    # Greenwich mean sidereal time [h] = 6.697375 + 0.0657098242 n + UT hour
    ut_hours = np.mod(utc_seconds, SECONDS_PER_DAY) / 3600.0
    sidereal_hours = 6.697375 + 0.0657098242 * n + ut_hours
    angle = np.radians(15.0 * sidereal_hours + longitude) - right_ascension
    hour_angle = np.mod(angle + np.pi, 2.0 * np.pi) - np.pi
    distance = (1.00014 - 0.01671 * np.cos(mean_anomaly)
                - 0.00014 * np.cos(2.0 * mean_anomaly))          # [au]
    return declination, hour_angle, 1.0 / distance**2


def sun_elevation(times, latitude, longitude, utc_offset) -> np.ndarray:
    """Geometric sun elevation above the horizon at given instants.

    Parameters
    ----------
    times : pandas.DatetimeIndex or array_like of datetime64
        Instants in local standard time, tz-naive.
    latitude : float
        Site latitude, north positive [degrees].
    longitude : float
        Site longitude, east positive [degrees].
    utc_offset : float
        Offset of local standard time from UTC [hours], e.g. 1.0 for UTC+1.

    Returns
    -------
    numpy.ndarray
        Elevation of the sun's centre above the horizon [degrees], without
        atmospheric refraction; negative below the horizon.

    Raises
    ------
    TimestampError
        If `times` cannot be read as tz-naive instants or contains NaT.
    ConfigError
        If a location setting is not a number or out of range.

    Notes
    -----
    ``sin e = sin φ sin δ + cos φ cos δ cos h`` (Michalsky 1988, eq. for
    elevation) with the declination δ from the sun's ecliptic longitude and the
    hour angle ``h = 15° · GMST + λ − α`` (α right ascension, GMST Greenwich mean
    sidereal time in hours), time counted in days from J2000.0 in UTC. Michalsky
    states an accuracy of 0.01° for 1950–2050; it degrades slowly outside.

    References
    ----------
    Michalsky, J. J. (1988). The Astronomical Almanac's algorithm for approximate
    solar position (1950–2050). Solar Energy 40(3):227–235.
    doi:10.1016/0038-092X(88)90045-X

    Examples
    --------
    >>> import pandas as pd
    >>> t = pd.DatetimeIndex(["2021-06-21 12:00"])
    >>> float(sun_elevation(t, 0.0, 0.0, 0.0)[0]) > 66
    True
    """
    _check_location(latitude, longitude, utc_offset)
    instants = _as_datetime64(times)
    seconds = _utc_seconds(instants, utc_offset)
    declination, hour_angle, _ = _solar_coordinates(seconds, longitude)
    phi = np.radians(latitude)
    sine = (np.sin(phi) * np.sin(declination)
            + np.cos(phi) * np.cos(declination) * np.cos(hour_angle))
    return np.degrees(np.arcsin(np.clip(sine, -1.0, 1.0)))


def _interval_minutes(index, interval_minutes) -> float:
    """The averaging interval [min]: given, the index frequency, or its usual spacing."""
    if interval_minutes is not None:
        if (isinstance(interval_minutes, bool)
                or not isinstance(interval_minutes, (int, float, np.integer, np.floating))
                or not 0 < interval_minutes <= _MINUTES_PER_DAY):
            raise ConfigError(f"interval_minutes = {interval_minutes!r}: expected a number of "
                              f"minutes in (0, {_MINUTES_PER_DAY}], e.g. 30 or 60")
        return float(interval_minutes)
    freq = getattr(index, "freq", None)
    if freq is not None:
        try:
            minutes = pd.Timedelta(freq) / pd.Timedelta(minutes=1)
        except (TypeError, ValueError):
            minutes = None
        if minutes is not None and 0 < minutes <= _MINUTES_PER_DAY:
            return float(minutes)
    instants = _as_datetime64(index, "index")
    if instants.size < 2:
        raise SpacingError("index: cannot infer the averaging interval from fewer than two "
                           "stamps; pass interval_minutes (e.g. 30 or 60)")
    steps = np.diff(instants).astype(np.int64)
    if (steps <= 0).any():
        row = int(np.flatnonzero(steps <= 0)[0]) + 1
        raise SpacingError(f"index: row {row} ({instants[row]}) does not come after the row "
                           "before it; stamps must increase strictly")
    values, counts = np.unique(steps, return_counts=True)
    minutes = values[np.argmax(counts)] / 60.0
    if minutes > _MINUTES_PER_DAY:
        raise SpacingError(f"index: usual spacing {minutes:g} min is longer than a day; pass "
                           "interval_minutes")
    return float(minutes)


def interval_midpoint_elevation(index, latitude, longitude, utc_offset,
                                interval_minutes=None) -> np.ndarray:
    """Sun elevation at the middle of each averaging interval.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start stamps of the intervals, local standard time, tz-naive.
    latitude, longitude : float
        Site position, north and east positive [degrees].
    utc_offset : float
        Offset of local standard time from UTC [hours].
    interval_minutes : float, optional
        Length of each interval [min]. By default the index frequency, or else the
        most common spacing between stamps.

    Returns
    -------
    numpy.ndarray
        Geometric sun elevation at ``stamp + interval/2`` [degrees].

    Raises
    ------
    SpacingError
        If the interval cannot be inferred (fewer than two stamps, stamps not
        increasing).
    TimestampError, ConfigError
        As in :func:`sun_elevation`.

    References
    ----------
    Michalsky, J. J. (1988). Solar Energy 40(3):227–235.
    """
    minutes = _interval_minutes(index, interval_minutes)
    instants = _as_datetime64(index, "index")
    half = np.timedelta64(int(round(minutes * 30.0)), "s")
    return sun_elevation(instants + half, latitude, longitude, utc_offset)


def potential_radiation(index, latitude, longitude, utc_offset,
                        interval_minutes=None) -> np.ndarray:
    """Top-of-atmosphere irradiance on a horizontal surface, mean over each interval.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start stamps of the intervals, local standard time, tz-naive.
    latitude, longitude : float
        Site position, north and east positive [degrees].
    utc_offset : float
        Offset of local standard time from UTC [hours].
    interval_minutes : float, optional
        Length of each interval [min], up to one day. By default the index
        frequency, or else the most common spacing between stamps.

    Returns
    -------
    numpy.ndarray
        Potential (extraterrestrial horizontal) radiation averaged over
        ``[stamp, stamp + interval)`` [W m-2]; exactly 0 for intervals the sun
        spends wholly below the horizon.

    Raises
    ------
    SpacingError
        If the interval cannot be inferred.
    TimestampError, ConfigError
        As in :func:`sun_elevation`, or for a bad `interval_minutes`.

    Notes
    -----
    The instantaneous irradiance is
    ``S (r0/r)^2 max(0, sin φ sin δ + cos φ cos δ cos h)`` with the solar
    constant S = :data:`fluxpart.constants.SOLAR_CONSTANT` (1361 W m-2, Kopp &
    Lean 2011) and the eccentricity correction (r0/r)^2 from the Earth–Sun
    distance of Michalsky (1988). Holding δ and (r0/r)^2 at their values at the
    interval middle and letting the hour angle advance at 2π per day, the mean over the hour-angle span [h1, h2] of the interval is exact:
    ``S (r0/r)^2 [a h + b sin h]`` evaluated over the sunlit parts of [h1, h2],
    divided by ``h2 − h1``, where ``a = sin φ sin δ``, ``b = cos φ cos δ`` and the
    sunlit parts are ``|h − 2πk| < ωs`` with the sunset hour angle
    ``ωs = arccos(−tan φ tan δ)`` (polar night ωs = 0, midnight sun ωs = π).
    Integrated over a day this is the daily extraterrestrial radiation of the
    handbooks (e.g. Allen et al. 1998, eq. 21).

    References
    ----------
    Michalsky, J. J. (1988). The Astronomical Almanac's algorithm for approximate
    solar position (1950–2050). Solar Energy 40(3):227–235.

    Kopp, G. & Lean, J. L. (2011). A new, lower value of total solar irradiance:
    evidence and climate significance. Geophysical Research Letters 38, L01706.
    doi:10.1029/2010GL045777

    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). Crop
    evapotranspiration. FAO Irrigation and Drainage Paper 56, Rome, eqs. 21–25.
    """
    _check_location(latitude, longitude, utc_offset)
    return potential_at_latitude(interval_sun(index, longitude, utc_offset, interval_minutes),
                                 latitude)


def interval_sun(index, longitude, utc_offset, interval_minutes=None) -> tuple:
    """The sun's course over each interval, which does not depend on latitude.

    Returns ``(sin_declination, cos_declination, h1, h2, span, eccentricity,
    h_middle)``: the sine and cosine of the declination [1] and (r0/r)^2 [1] at each
    interval's middle, the hour angles at its start (in [-π, π)) and end [rad], the
    hour-angle span of an interval [rad] and the hour angle at the interval's middle (in
    [-π, π)) [rad]; for :func:`potential_at_latitude`, which gives
    :func:`potential_radiation` at any latitude from them (a scan over latitudes
    computes the sun's position once), and :func:`solar_geometry`'s sun elevation at the
    intervals' middles (the same course, not computed again). The arrays are read-only:
    the last course computed is kept and returned again for the same stamps, position
    and interval.
    """
    minutes = _interval_minutes(index, interval_minutes)
    instants = _as_datetime64(index, "index")
    key = (float(longitude), float(utc_offset), float(minutes))
    kept, last = _SUN_CACHE                 # one read each: another thread may replace them
    for entry in (kept, last):
        if entry is not None and entry[0] == key and np.array_equal(entry[1], instants):
            if entry is last:
                _SUN_CACHE[0] = last        # asked for twice: kept past one-off courses
            return entry[2]
    start = _utc_seconds(instants, utc_offset)
    middle = start + minutes * 30.0
    declination, h_middle, eccentricity = _solar_coordinates(middle, longitude)
    span = 2.0 * np.pi * minutes / _MINUTES_PER_DAY
    h1 = np.mod(h_middle - 0.5 * span + np.pi, 2.0 * np.pi) - np.pi   # in [-π, π)
    h2 = h1 + span                                            # below 3π
    sun = (np.sin(declination), np.cos(declination), h1, h2, span, eccentricity, h_middle)
    for values in (*sun[:4], *sun[5:]):
        values.flags.writeable = False             # shared by the calls the cache serves
    _SUN_CACHE[1] = (key, instants.copy(), sun)   # a copy: the caller's array may change
    return sun


#: Courses of :func:`interval_sun` kept for the calls that ask again: ``[kept, last]``,
#: each None or ``((longitude, utc_offset, minutes), stamps, sun)``; ``last`` the latest
#: computed, ``kept`` the latest asked for twice. A run asks for the sun's course over its
#: record four times (the reader's and the screening's potential radiation, the clock
#: check's flipped latitude and its latitude scan) and over the record moved by each of
#: the clock check's lags once; the same stamps, position and interval give the same
#: arrays, so the record's course is computed once (round speed20). A batch worker's
#: next site replaces both.
_SUN_CACHE: list = [None, None]


def forget_courses() -> None:
    """Let go of the sun courses :func:`interval_sun` keeps (up to two records' worth).

    Called by the pipeline once the clock check, the last stage to ask for the record's
    course again, is done, so that the arrays do not add to a long record's peak memory.
    Results never depend on it: a course not kept is computed again, the same bits.

    References
    ----------
    Michalsky, J. J. (1988). Solar Energy 40(3):227–235 (the course computed).
    """
    _SUN_CACHE[:] = [None, None]


def potential_at_latitude(sun: tuple, latitude: float) -> np.ndarray:
    """:func:`potential_radiation` [W m-2] at `latitude` [degrees] from :func:`interval_sun`."""
    sin_declination, cos_declination, h1, h2, span, eccentricity = sun[:6]
    phi = np.radians(latitude)
    a = np.sin(phi) * sin_declination
    b = np.cos(phi) * cos_declination
    with np.errstate(divide="ignore", invalid="ignore"):
        cos_sunset = np.where(b > 0, -a / b, np.where(a > 0, -1.0, 1.0))
    sunset = np.arccos(np.clip(cos_sunset, -1.0, 1.0))         # ωs in [0, π]

    integral = np.zeros_like(h1)
    for centre in (0.0, 2.0 * np.pi):                         # sunlit windows met by [h1, h2]
        low = np.maximum(h1, centre - sunset)
        high = np.minimum(h2, centre + sunset)
        # the sines only where the interval meets the sunlit window (about half the
        # records for the window around noon, few for the next one): the same values
        lit = np.flatnonzero(high > low)
        part = np.zeros_like(h1)
        part[lit] = (a[lit] * high[lit] + b[lit] * np.sin(high[lit])) \
            - (a[lit] * low[lit] + b[lit] * np.sin(low[lit]))
        integral = integral + part
    mean = SOLAR_CONSTANT * eccentricity * np.maximum(integral, 0.0) / span
    return mean


def solar_geometry(index, site, interval_minutes=None) -> pd.DataFrame:
    """Sun elevation and potential radiation for each interval of a record.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start stamps of the intervals, local standard time, tz-naive.
    site : fluxpart.site.Site
        The site (latitude, longitude, utc_offset).
    interval_minutes : float, optional
        Interval length [min]; inferred from the index by default.

    Returns
    -------
    pandas.DataFrame
        Indexed like `index`, with columns ``sun_elevation`` (geometric sun
        elevation at the interval middle [degrees]) and ``potential_radiation``
        (top-of-atmosphere horizontal irradiance, interval mean [W m-2]).

    Raises
    ------
    SpacingError, TimestampError, ConfigError
        As in :func:`potential_radiation`.

    References
    ----------
    Michalsky, J. J. (1988). Solar Energy 40(3):227–235. Kopp, G. & Lean, J. L. (2011).
    Geophysical Research Letters 38, L01706.
    """
    minutes = _interval_minutes(index, interval_minutes)
    position = (site.latitude, site.longitude, site.utc_offset)
    _as_datetime64(index, "index")      # its refusal first, as the elevation's own gives it
    _check_location(*position)          # before the offset is used: a ConfigError, not a TypeError
    if not _whole_seconds(minutes, site.utc_offset):
        return pd.DataFrame(
            {"sun_elevation": interval_midpoint_elevation(index, *position, minutes),
             "potential_radiation": potential_radiation(index, *position, minutes)},
            index=pd.DatetimeIndex(index),
        )
    sun = interval_sun(index, site.longitude, site.utc_offset, minutes)
    return pd.DataFrame(
        {"sun_elevation": _middle_elevation(sun, site.latitude),
         "potential_radiation": potential_at_latitude(sun, site.latitude)},
        index=pd.DatetimeIndex(index),
    )


def _whole_seconds(minutes: float, utc_offset: float) -> bool:
    """Whether half an interval and the UTC offset are whole seconds, so that
    :func:`interval_sun`'s middles (stamp − offset + half, in float seconds) are
    :func:`interval_midpoint_elevation`'s instants (stamp + half − offset) to the bit: sums
    of whole numbers far below 2**53 are exact in any order."""
    return float(minutes * 30.0).is_integer() and float(utc_offset * 3600.0).is_integer()


def _middle_elevation(sun: tuple, latitude: float) -> np.ndarray:
    """:func:`interval_midpoint_elevation` [degrees] from :func:`interval_sun`'s course:
    :func:`sun_elevation`'s formula on the declination and hour angle at the middles."""
    sin_declination, cos_declination, h_middle = sun[0], sun[1], sun[6]
    phi = np.radians(latitude)
    sine = np.sin(phi) * sin_declination + np.cos(phi) * cos_declination * np.cos(h_middle)
    return np.degrees(np.arcsin(np.clip(sine, -1.0, 1.0)))


def night_mask(rg, potential, rg_threshold=10.0, *, potential_epsilon=1e-6) -> np.ndarray:
    """Which records are night.

    Parameters
    ----------
    rg : array_like
        Measured global radiation [W m-2]; NaN where missing.
    potential : array_like
        Potential radiation of the same records [W m-2], e.g. from
        :func:`potential_radiation`.
    rg_threshold : float, optional
        Night where measured Rg is below this [W m-2]. Default 10 W m-2, the
        threshold common in flux partitioning (Reichstein et al. 2005) (m).
    potential_epsilon : float, optional
        Where Rg is missing, night where potential radiation is at most this
        [W m-2]; the default 1e-6 W m-2 means "sun below the horizon for the whole
        interval".

    Returns
    -------
    numpy.ndarray of bool
        True for night records.

    Raises
    ------
    FluxpartError
        If `rg` and `potential` differ in length.
    ConfigError
        If a threshold is not a finite number.

    Notes
    -----
    Measured radiation decides where it exists, so overcast dawns and dusks with
    Rg below the threshold count as night. Where Rg is missing, only intervals
    with the sun wholly below the horizon count as night, so twilight intervals
    with a gap in Rg are day (the conservative side for respiration fits).

    References
    ----------
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11:1424–1439.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    for key, value in (("rg_threshold", rg_threshold), ("potential_epsilon", potential_epsilon)):
        if (isinstance(value, bool) or not isinstance(value, (int, float, np.integer,
                                                              np.floating))
                or not np.isfinite(value)):
            raise ConfigError(f"{key} = {value!r}: expected a finite number of W m-2")
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    if rg.shape != potential.shape:
        raise LengthMismatchError(f"night_mask: rg has shape {rg.shape} but potential has shape "
                                  f"{potential.shape}; pass the same records")
    by_potential = potential <= potential_epsilon
    with np.errstate(invalid="ignore"):
        by_rg = rg < rg_threshold
    return np.where(np.isnan(rg), by_potential, by_rg)
