"""Columns that pass every range but hold the wrong quantity or the wrong record.

Mapping faults and filled or coded values that no plausible range can see, found by
physics the true columns must obey:

* air and soil temperature swapped (:func:`swapped_temperatures`): heat conduction
  damps the diurnal cycle of the soil with depth, so the soil column's days swing
  less than the air's;
* NEE whose gaps were filled by linear interpolation (:func:`interpolated_nee`): a
  measured flux's random error sets each record off the line through its neighbours;
* NEE without a gap for two months (:func:`gapless_nee`): measured NEE loses records
  every few days, so the column is gap-filled already or unscreened;
* a temperature written 0 for a missing value (:func:`zero_coded_temperature`): no
  temperature jumps to exactly 0 and back within a record;
* the dew point mapped as air temperature (:func:`dew_point_as_tair`): the identity
  e_s(dew point) = vapour pressure ties it to the VPD and RH columns;
* a soil temperature mapped as air temperature (:func:`delayed_tair`): the air
  temperature that VPD and RH imply leads its daily course by hours;
* the vapour pressure or the saturation vapour pressure mapped as VPD
  (:func:`vapour_pressure_as_vpd`): RH and air temperature split e_s(T) into the
  vapour pressure and its deficit;
* NEE with its values of one sign removed (:func:`censored_nee`): the random error puts
  values near zero flux on both sides of 0;
* values of twice the interval written in two records (:func:`values_written_twice`):
  averages of successive intervals differ;
* a quality-flag or class column mapped as a measured variable
  (:func:`flag_as_measurement`): a measured quantity takes many values over a month;
* a flux that already holds the storage term mapped as the turbulent flux beside a
  storage column (:func:`storage_in_turbulent_flux`): a turbulent flux trades against
  the storage term from one night to the next, NEE does not;
* an air temperature without a diurnal course (:func:`flat_air_temperature`): on clear
  days the air near the ground warms by day and cools by night by several K.

NEE or air temperature shifted in time against the drivers (by records, hours or whole
days) and NEE whose light response turned sign within the record are found by
:mod:`fluxpart.record_shifts` (:func:`nee_lag`, :func:`tair_lag`, :func:`nee_day_shift`,
:func:`months_rising_with_light`, ...), whose names this module still exports.

Each returns a one-line message (the caller's warning) or None. They only warn: the
physics leaves rare true records on the far side of each criterion (see each
function's Notes), and a refused valid record is worse than a warned wrong one. For the
temperature swap the choice is also one of proportion: a bare, dry soil probe at 2 cm
can swing twice the air (m), and on the example site the swap moved annual NEE by
+2 g C m-2 and Reco by +4 g C m-2, within their stated uncertainty (6.9 and 22 g C m-2,
1 sigma), so a refusal would block valid records to prevent a small error.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ._groups import group_positions
from .daily_anomaly import daily_anomaly

# the record-shift checks live in record_shifts (round verifysplit); the names other
# modules and tests import from here are kept (F401: imported to be re-exported)
from .record_shifts import (  # noqa: F401
    _CLEAR_RESPONSE,
    _LAG_STANDARD_ERRORS,
    _MAX_SHIFT_DAYS,
    _MIN_PAIRS,
    _MONTH_PAIRS,
    RECORD_SHIFT_WORDS,
    _best_of,
    _change_scores,
    _clear_responses,
    _cloud_changes,
    _correlation,
    _decide,
    _family_bound,
    _records_per_day,
    _serial_inflation,
    _shift_pairs,
    _stretch_scores,
    clear_sky_course,
    months_rising_with_light,
    nee_day_shift,
    nee_hour_shift,
    nee_lag,
    nee_shift_from_month,
    tair_lag,
)
from .robust_scale import scaled_mad
from .uncertainty import gap_runs
from .variables import saturation_temperature, saturation_vapour_pressure, vpd_from_rh

__all__ = ["FLUX_COPY_WORDS", "GAPLESS_DAYS", "RECORD_SHIFT_WORDS", "SOIL_RANGE_RATIO",
           "censored_nee",
           "clear_sky_course", "delayed_tair", "delayed_tair_in_a_year", "dew_point_as_tair",
           "flag_as_measurement", "flux_as_storage", "gapless_nee", "interpolated_nee",
           "months_rising_with_light", "nee_day_shift", "nee_lag", "same_temperature_columns",
           "shaded_rg", "slope_reads_turbulent", "storage_in_turbulent_flux", "storage_slope",
           "swapped_temperatures", "tair_lag", "values_written_twice",
           "vapour_pressure_as_vpd", "zero_coded_temperature"]

#: Ratio of the soil column's to the air column's median daily temperature range above
#: which the columns are named as swapped [1]. Heat conduction damps the diurnal
#: amplitude with depth z as exp(-z / d), damping depth d = sqrt(2 kappa / omega) about
#: 0.1 m for typical soils (thermal diffusivity kappa 3-8e-7 m2 s-1; Hillel 1998,
#: Environmental Soil Physics, ch. 12 (m); Campbell & Norman 1998, An Introduction to
#: Environmental Biophysics, ch. 8 (m)). A probe at the shallowest usual depth, 2 cm
#: (common practice), keeps at most exp(-0.2) = 0.82 of the surface's swing, so its
#: range exceeds the air's 1.5 times only where the surface swings 1.8 times the air:
#: bare, dry, sunlit soil (m), not the vegetated surfaces towers stand over. Our choice.
SOIL_RANGE_RATIO = 1.5
#: The soil's median daily range must also exceed the air's by this many K: probes read
#: to about 0.1 K (m), so a ratio of a few resolution steps proves nothing. Our choice.
_SOIL_RANGE_EXCESS = 1.0
#: Days with two thirds of both temperatures present needed to judge: two weeks, so a
#: few days of weather (a calm, clear spell) do not decide. Our choice.
_MIN_DAYS = 14


def _daily_ranges(values: np.ndarray, per_day: int, usable: np.ndarray) -> np.ndarray:
    """Max minus min of each whole day (calendar rows) where `usable`."""
    days = values.size // per_day
    grid = values[:days * per_day].reshape(days, per_day)
    with np.errstate(invalid="ignore"):
        return (np.nanmax(grid[usable], axis=1) - np.nanmin(grid[usable], axis=1))


def swapped_temperatures(tair, tsoil, interval_minutes: float, first_offset: int = 0,
                         columns=None) -> str | None:
    """A message where the soil column swings more than the air column, or None.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [°C] (NaN = missing), one length.
    interval_minutes : float
        Record interval [min].
    first_offset : int, optional
        Records from the first record back to the start of its day, so that days are
        calendar days (0 where the record starts at midnight).
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the ranges fit, or fewer than 14 days have two
        thirds of both temperatures.

    Notes
    -----
    The median over days of each column's daily range (maximum minus minimum) is
    compared. A soil probe at depth z keeps exp(-z / d) of the surface's diurnal
    amplitude, d about 0.1 m (see :data:`SOIL_RANGE_RATIO`); where the soil column's
    median range exceeds the air's 1.5 times and by more than 1 K, the two columns are
    named as likely swapped. Only a probe at the surface of bare, dry soil swings so
    much, so this only warns.

    References
    ----------
    Hillel, D. (1998). Environmental Soil Physics. Academic Press, ch. 12 (m).
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    tair = np.asarray(tair, dtype=float)
    tsoil = np.asarray(tsoil, dtype=float)
    per_day = _records_per_day(interval_minutes)
    if per_day < 4 or tair.size != tsoil.size:
        return None
    pad = np.full(int(first_offset) % per_day, np.nan)
    air, soil = np.concatenate([pad, tair]), np.concatenate([pad, tsoil])
    both = np.isfinite(air) & np.isfinite(soil)
    days = both.size // per_day
    usable = both[:days * per_day].reshape(days, per_day).sum(axis=1) >= (2 * per_day) // 3
    if usable.sum() < _MIN_DAYS:
        return None
    air, soil = np.where(both, air, np.nan), np.where(both, soil, np.nan)
    air_range = float(np.median(_daily_ranges(air, per_day, usable)))
    soil_range = float(np.median(_daily_ranges(soil, per_day, usable)))
    if not (soil_range > SOIL_RANGE_RATIO * air_range
            and soil_range - air_range > _SOIL_RANGE_EXCESS):
        return None
    names = columns or {}
    air_column, soil_column = names.get("tair", "tair"), names.get("tsoil", "tsoil")
    return (f"soil temperature (column {soil_column!r}) swings a median {soil_range:.1f} K "
            f"a day, the air temperature (column {air_column!r}) {air_range:.1f} K, over "
            f"{int(usable.sum())} days: heat conduction damps the soil's daily cycle with "
            "depth (to exp(-z / 0.1 m) of the surface's), so a soil swinging more than the "
            "air is a probe at the surface of bare, dry soil or, far more often, the two "
            "columns swapped: if so, exchange tair and tsoil in [input.columns]")

def swapped_temperatures_in_months(tair, tsoil, stamps, interval_minutes: float,
                                   columns=None) -> str | None:
    """A message naming months whose soil column swings more than the air column, or None.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [°C] (NaN = missing), one length.
    stamps : pandas.DatetimeIndex
        Interval starts of the records (consecutive, one interval apart).
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where no calendar month of 14 or more usable days (two
        thirds of both temperatures present) breaks :func:`swapped_temperatures`'s rule.

    Notes
    -----
    :func:`swapped_temperatures`'s rule month by month, for a record where the whole
    record's medians keep it: a logger program changed within the year (a new logger,
    a re-wired channel) that writes the two temperatures under each other's header from
    then on leaves the months before it right, and over the year their days outnumber
    the swapped ones. Heat conduction damps the soil's daily cycle with depth (to
    exp(-z / d) of the surface's, d about 0.1 m; Campbell & Norman 1998, ch. 8 (m)) in
    every month, so a month whose soil column swings more than 1.5 times the air's, and
    by more than 1 K, holds a surface probe of bare, dry soil or the columns swapped.
    A swap turns a month's ratio r into 1 / r, so the months left right hold a soil
    damped against the air: where the months not named swing the soil column as much as
    the air or more (their median ratio 1 or above), the named ones are the sunny season
    of a shallow probe under a sparse canopy (an invented sub-Antarctic heath's probe at
    2 cm: ratios 1.0-1.56 month by month, three months past 1.5; round falsealarm53), and
    nothing is named.
    On the example site, the columns swapped from July moved nighttime GPP and Reco by
    -89 g C m-2 and daytime GPP by -62 without a word (the whole record's medians, air
    3.8 K and soil 4.7 K, kept it quiet).

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    Hillel, D. (1998). Environmental Soil Physics. Academic Press, ch. 12 (m).
    """
    tair = np.asarray(tair, dtype=float)
    tsoil = np.asarray(tsoil, dtype=float)
    stamps = pd.DatetimeIndex(stamps)
    per_day = _records_per_day(interval_minutes) if interval_minutes > 0 else 0
    if per_day < 4 or not tair.size == tsoil.size == len(stamps) or tair.size == 0:
        return None
    first_day = stamps[0].normalize()
    offset = int(round((stamps[0] - first_day) / pd.Timedelta(minutes=interval_minutes)))
    pad = np.full(offset % per_day, np.nan)
    air, soil = np.concatenate([pad, tair]), np.concatenate([pad, tsoil])
    both = np.isfinite(air) & np.isfinite(soil)
    days = both.size // per_day
    if days == 0:
        return None
    usable = both[:days * per_day].reshape(days, per_day).sum(axis=1) >= (2 * per_day) // 3
    air, soil = np.where(both, air, np.nan), np.where(both, soil, np.nan)
    grid_air = air[:days * per_day].reshape(days, per_day)[usable]
    grid_soil = soil[:days * per_day].reshape(days, per_day)[usable]
    with np.errstate(invalid="ignore"):
        air_ranges = np.nanmax(grid_air, axis=1) - np.nanmin(grid_air, axis=1)
        soil_ranges = np.nanmax(grid_soil, axis=1) - np.nanmin(grid_soil, axis=1)
    months = (first_day + pd.to_timedelta(np.flatnonzero(usable), unit="D")).strftime("%Y-%m")
    named, others = [], []
    for month in pd.unique(months):
        here = months == month
        if here.sum() < _MIN_DAYS:
            continue
        air_range = float(np.median(air_ranges[here]))
        soil_range = float(np.median(soil_ranges[here]))
        if (soil_range > SOIL_RANGE_RATIO * air_range
                and soil_range - air_range > _SOIL_RANGE_EXCESS):
            named.append((month, air_range, soil_range))
        elif air_range > 0:
            others.append(soil_range / air_range)
    # a swap turns a month's ratio r into 1 / r: months above 1.5 swapped hold a soil
    # below 1 / 1.5 of the air's, and the months around them, right, a soil damped as
    # much. Where the soil column swings as much as the air in the months not named too,
    # those months are the sunny season of a shallow probe (falsealarm53)
    if not named or (others and np.median(others) >= 1.0):
        return None
    names = columns or {}
    air_column, soil_column = names.get("tair", "tair"), names.get("tsoil", "tsoil")
    span = (named[0][0] if len(named) == 1 else
            f"{named[0][0]} .. {named[-1][0]}" if len(named) > 2 else
            f"{named[0][0]}, {named[1][0]}")
    air_range = float(np.median([m[1] for m in named]))
    soil_range = float(np.median([m[2] for m in named]))
    return (f"soil temperature (column {soil_column!r}) swings a median {soil_range:.1f} K a "
            f"day, the air temperature (column {air_column!r}) {air_range:.1f} K, in "
            f"{len(named)} month(s) ({span}), while the whole record's medians do not: heat "
            "conduction damps the soil's daily cycle with depth (to exp(-z / 0.1 m) of the "
            "surface's) in every month, so those months hold a probe at the surface of bare, "
            "dry soil or, far more often, the two columns swapped there (a logger program "
            "changed within the record): if so, exchange the two columns in those months in "
            "a copy of the file")


#: Half-width of the bins beside 0 whose values are read [µmol m-2 s-1]. The random
#: error of a half-hourly CO2 flux near zero flux has a standard deviation of about
#: 0.3-1 µmol m-2 s-1 (Richardson et al. 2006 (m); Hollinger & Richardson 2005 (m)),
#: with a Laplace (double exponential) shape whose scale b is sigma / sqrt(2) >= 0.2;
#: over 0.25 the density of any distribution of true fluxes blurred by that error
#: changes by at most exp(0.25 / b) = 3.5, so a value within 0.25 of 0 lies on either
#: side with a chance of at least 1 / 4.5 = 0.22. Our choice.
_CENSOR_BIN = 0.25
#: Values within the bin, one after another in time, all on one side of 0 that name the
#: other side as removed. With a chance of at least 0.22 for either side (above), 50 in a
#: row on one side come by chance with a probability below 0.78^50 = 4e-6 per start; the
#: longest such run on the 168 generated site-years of the three benchmarks is 20 (night)
#: and 13 (day). Our choice.
_CENSOR_RUN = 50


def _zero_bins(nee: np.ndarray, stamps) -> np.ndarray:
    """Half-width of the bin beside 0 for each record [µmol m-2 s-1]: :data:`_CENSOR_BIN`,
    or 1.25 Laplace scales of the month's own random error where that is smaller.

    The random error is estimated from the month's successive differences (both records
    present): 1.4826 MAD / sqrt(2) is the standard deviation of one record's error where
    the flux itself changes little from one record to the next (the diurnal course
    inflates it, which only keeps the bin at its full width). A column whose values are
    far smaller than a flux's (a unit slip) has a far smaller error, and the bin shrinks
    with it, so the bound of :data:`_CENSOR_BIN` on either side's chance holds.
    """
    bins = np.full(nee.size, _CENSOR_BIN)
    if nee.size < 2:
        return bins
    months = (np.zeros(nee.size, dtype=np.int64) if stamps is None else
              (pd.DatetimeIndex(stamps).year.to_numpy() * 12
               + pd.DatetimeIndex(stamps).month.to_numpy()))
    steps = np.diff(nee)
    same = (months[1:] == months[:-1]) & np.isfinite(steps)
    # each month's records and steps in time order by one sort each (_groups)
    steps_of = group_positions(months[1:], same)
    for month, records in group_positions(months).items():
        chosen = steps_of.get(month)
        if chosen is None or chosen.size < 2:
            continue
        values = steps[chosen]
        sigma = scaled_mad(values) / math.sqrt(2.0)
        scale = sigma / math.sqrt(2.0)                 # the Laplace scale b
        bins[records] = min(_CENSOR_BIN, _CENSOR_BIN / 0.2 * scale)
    return bins


def _one_sided_run(values: np.ndarray, bins: np.ndarray, stamps,
                   lacking: str) -> tuple[int, int, object, object]:
    """The longest run of `values` within their `bins` of 0 (exact zeros left out), in time
    order, holding none of the `lacking` sign: (its length, all such values, the stamps
    of its first and last value)."""
    near = np.isfinite(values) & (values != 0) & (np.abs(values) <= bins)
    positions = np.flatnonzero(near)
    kept = values[positions] < 0 if lacking == "positive" else values[positions] > 0
    # the runs of kept values: where the padded mask steps up (a start) and down (an end)
    steps = np.diff(np.concatenate(([0], kept.astype(np.int8), [0])))
    starts, ends = np.flatnonzero(steps == 1), np.flatnonzero(steps == -1)
    if starts.size == 0:
        return 0, int(positions.size), None, None
    lengths = ends - starts
    best = int(np.argmax(lengths))
    first, last = positions[starts[best]], positions[ends[best] - 1]
    return (int(lengths[best]), int(positions.size),
            None if stamps is None else stamps[first], None if stamps is None else stamps[last])


def censored_nee(nee, is_night, stamps=None, columns=None) -> str | None:
    """A message where measured NEE holds no values of one sign next to zero for a
    stretch of the record, by day or at night, or None.

    Parameters
    ----------
    nee : array_like
        Measured NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    is_night : array_like of bool
        Night mask of the records.
    stamps : pandas.DatetimeIndex, optional
        Interval starts of the records, to date the stretch in the message.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text, or None where no run of :data:`_CENSOR_RUN` values within
        :data:`_CENSOR_BIN` of 0 lies wholly below 0 by day or wholly above it at night.

    Notes
    -----
    A measured flux is the true flux plus a random error of about 0.3-1 µmol m-2 s-1
    near zero flux, symmetric and heavy-tailed (Laplace; Hollinger & Richardson 2005
    (m), Richardson et al. 2006 (m)). Where true fluxes near zero occur (dawn, dusk,
    overcast or dormant days; cold nights), measured values therefore fall on both
    sides of 0, each side with a chance of at least 0.22 (see :data:`_CENSOR_BIN`), and
    long runs of values near 0 on one side only do not occur. A column whose day
    values near 0 lie below it, 50 or more in a row, has had its positive daytime values
    removed: a filter of "impossible" daytime release, applied to the file (for the year
    or a season); likewise negative night values removed as "impossible" uptake. Such a
    filter keeps the errors of one sign only, so the gap filling and both partitionings
    learn a flux biased towards uptake by day (on the example site, the positive day
    values removed moved annual NEE by -98 g C m-2, from May to September alone by -42)
    or towards release at night (+11 g C m-2), and the stated random error, estimated
    from the kept records, cannot show it. Exact zeros are not counted (a zero written
    for missing is named by the reader). Where a month's own random error (from the
    successive differences of its day records for the day test, of its night records for
    the night test) is smaller than that bound, its bin shrinks in proportion
    (:func:`_zero_bins`), so a flux a unit slip made small is not named for its shape. A
    file with NEE rounded to whole µmol m-2 s-1 holds no values in the bins and is not
    judged; a filter of a shorter season (three
    summer months, about 35 day values near 0 at a grassland) is not found.

    References
    ----------
    Hollinger, D. Y., & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology, 25,
    873-885 (m).
    Richardson, A. D., et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology, 136, 1-18 (m).
    """
    nee = np.asarray(nee, dtype=float)
    is_night = np.asarray(is_night, dtype=bool)
    if nee.size != is_night.size or (stamps is not None and len(stamps) != nee.size):
        return None
    found = []
    for part, chosen, kept, lacking in (("by day", ~is_night, "below", "positive"),
                                        ("at night", is_night, "above", "negative")):
        times = None if stamps is None else pd.DatetimeIndex(stamps)[chosen]
        # each class's bins from its own random error: a month's night error can be a
        # tenth of its day error (the error grows with the flux, Richardson et al. 2006
        # (m)), and a bin from both together would be too wide for the nights
        bins = _zero_bins(nee[chosen], times)
        run, near, first, last = _one_sided_run(nee[chosen], bins, times, lacking)
        if run < _CENSOR_RUN:
            continue
        when = "" if first is None else f" ({first:%Y-%m-%d} .. {last:%Y-%m-%d})"
        found.append(f"{part} {run} values in a row{when} of the {near} within "
                     f"{_CENSOR_BIN:g} µmol m-2 s-1 (or the month's random error) of 0 lie "
                     f"{kept} it ({lacking} values removed?)")
    if not found:
        return None
    return (f"NEE (column {(columns or {}).get('nee', 'nee')!r}) holds values of one sign "
            f"only next to 0: {'; '.join(found)}, where a measured flux's random error (a "
            "few tenths of a µmol m-2 s-1, of either sign) puts records near zero flux on "
            "both sides: values of one sign look removed by a filter of 'impossible' "
            "fluxes, which biases the gap filling and both partitionings; restore them in "
            "a copy of the file (screen by quality, not by sign)")


#: Pairs of records (one phase) needed to judge a column written twice: two weeks of
#: half-hours. Our choice.
_TWICE_MIN_PAIRS = 672
#: Share of the pairs of one phase with equal values at or above which, with the other
#: phase at or below :data:`_TWICE_OTHER`, a column is named as written twice. A value
#: repeated by a forward fill repeats in every pair of its phase, minus the pairs where
#: the coarser file itself had a gap; 0.8 leaves room for those. Our choice.
_TWICE_SHARE = 0.8
#: The other phase's share of equal pairs at or below which the repeats are a pattern
#: and not a sensor's resolution (a deep soil probe read to 0.1 K repeats in both
#: phases alike). Our choice.
_TWICE_OTHER = 0.4


def values_written_twice(values, name: str, interval_minutes: float, sunlit=None,
                         columns=None) -> str | None:
    """A message where a column repeats each value in the next record, every other
    record (values of twice the interval written twice), or None.

    Parameters
    ----------
    values : array_like
        The column's values, one per record (NaN = missing).
    name : str
        Canonical variable name (to name the column).
    interval_minutes : float
        Record interval [min].
    sunlit : array_like of bool, optional
        Records with the sun up; where given (for Rg), only pairs of two such records
        count (Rg is 0 all night in both phases).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text, or None where neither phase of record pairs (records 2i, 2i + 1
        or 2i + 1, 2i + 2) holds equal values in :data:`_TWICE_SHARE` of its pairs while
        the other holds them in at most :data:`_TWICE_OTHER`, or fewer than
        :data:`_TWICE_MIN_PAIRS` pairs of a phase are present.

    Notes
    -----
    Averages of a varying quantity over successive intervals differ: weather and the
    sun's course move air temperature, humidity and radiation from one half-hour to the
    next by more than a logger's resolution in most records, and a flux's random error
    sets each flux record apart (Richardson et al. 2006 (m)). A file of hourly values
    joined to half-hourly records by a forward fill (or an hourly station's file
    resampled to 30 min) repeats each hourly value in the next record: the pairs
    starting at one phase are equal, those of the other phase differ as often as
    neighbouring hours do. The fluxes then rest on a driver an interval late in every
    other record, and a flux written twice halves its independent records, which the
    random error from paired records does not see (on the example site: air temperature
    so written moved GPP by -23 and Reco by -22 g C m-2; NEE so written moved daytime GPP
    by -30 g C m-2, shrank NEE's stated 1-sigma from 10.7 to 8.0 g C m-2 and was named
    only as a unit change of two months). A quantity read to a coarse resolution repeats
    in both phases alike and is not named.

    References
    ----------
    Richardson, A. D., et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology, 136, 1-18 (m).
    """
    values = np.asarray(values, dtype=float)
    if values.size < 4 or interval_minutes <= 0:
        return None
    equal = values[1:] == values[:-1]
    present = np.isfinite(values[1:]) & np.isfinite(values[:-1])
    if sunlit is not None:
        sunlit = np.asarray(sunlit, dtype=bool)
        if sunlit.size != values.size:
            return None
        present &= sunlit[1:] & sunlit[:-1]
    shares, counts = [], []
    for phase in (0, 1):
        chosen = present[phase::2]
        counts.append(int(chosen.sum()))
        shares.append(float(equal[phase::2][chosen].mean()) if chosen.any() else math.nan)
    if min(counts) < _TWICE_MIN_PAIRS or not all(math.isfinite(v) for v in shares):
        return None
    high, low = max(shares), min(shares)
    if high < _TWICE_SHARE or low > _TWICE_OTHER:
        return None
    column = (columns or {}).get(name, name)
    return (f"{name} (column {column!r}) repeats its value in the next record in "
            f"{100 * high:.0f} % of the record pairs of one phase and {100 * low:.0f} % of the "
            "other: values "
            f"of {2 * interval_minutes:g} minutes written twice into {interval_minutes:g}-"
            "minute records (a coarser file joined by a forward fill), so every other "
            "record holds the previous interval's value; join the coarser values to their "
            "own records only, or give the file its own interval")


#: Consecutive records on one straight line (to the file's resolution) that make a run of
#: interpolated NEE: 5 records (3 second differences in a row). Our choice: the random
#: error of a half-hourly flux (see :func:`interpolated_nee`) puts three records on a line
#: by chance now and then, five almost never.
_LINE_RECORDS = 5
#: Records in such runs needed before the column is named: a day of half-hours. Our choice.
_LINE_MIN_RECORDS = 48
#: Largest chance, estimated from the second differences just beside the tolerance, that
#: the noise alone puts three records within it (a coarse resolution or a very quiet
#: flux); above it the column is not judged. At 0.02, runs of 3 second differences come
#: by chance about once in 10^5 positions. Our choice.
_LINE_MAX_CHANCE = 0.02


def interpolated_nee(nee, interval_minutes: float, stamps=None, columns=None) -> str | None:
    """A message where NEE lies on straight lines over runs of records, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected), consecutive
        records of one interval.
    interval_minutes : float
        Record interval [min].
    stamps : pandas.DatetimeIndex, optional
        Interval starts, to name the first run.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than 48 records lie in such runs, fewer than
        500 second differences exist, or the resolution is too coarse to tell.

    Notes
    -----
    A measured half-hourly flux carries a random error of turbulent sampling of
    10-20 % of the flux plus a few tenths of a µmol m-2 s-1 (Hollinger & Richardson
    2005; Richardson et al. 2006), independent from one record to the next, so the
    second difference x[t+1] - 2 x[t] + x[t-1] is exactly 0 (within the rounding of the
    file's resolution, twice its smallest step) only by chance. A gap bridged by linear
    interpolation (a logger's or a spreadsheet's fill, a gap-filled column mapped as
    measured NEE) puts every record of the gap on the line between its neighbours. Runs
    of at least 5 records on one line (records of one value, which the stuck-sensor
    check names, left out) are counted; the chance that noise alone gives a second
    difference within the tolerance is estimated from those just beside it (within
    three times the tolerance), and where that chance exceeds 0.02 (a resolution too
    coarse for the noise) nothing is judged. Then runs of 48 records or more in all are
    named: the gaps the fluxes were filled in were not gaps to the pipeline, which
    then gives them no gap-filling uncertainty and fits the partitioning to values no
    tower measured.

    References
    ----------
    Hollinger, D. Y., & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology 25,
    873-885 (m).
    Richardson, A. D., et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136, 1-18 (m).
    """
    x = np.asarray(nee, dtype=float)
    if x.size < 3 or interval_minutes <= 0:
        return None
    second = x[2:] - 2.0 * x[1:-1] + x[:-2]
    judged = np.isfinite(second)
    if int(judged.sum()) < _MIN_PAIRS:
        return None
    values = np.unique(x[np.isfinite(x)])
    steps = np.diff(values)
    step = float(steps.min()) if steps.size else 0.0
    scale = float(np.max(np.abs(values))) if values.size else 0.0
    tolerance = 2.0 * step + 1e-9 * scale
    size = np.abs(np.where(judged, second, np.inf))
    beside = int(np.count_nonzero((size > tolerance) & (size <= 3.0 * tolerance)))
    if beside / (2.0 * judged.sum()) > _LINE_MAX_CHANCE:
        return None
    first = x[1:-1] - x[:-2]
    flat = (first == 0.0) & ((x[2:] - x[1:-1]) == 0.0)
    straight = (size <= tolerance) & ~flat
    # runs of second differences within the tolerance, each spanning its length + 2 records
    starts, lengths = gap_runs(straight)
    long = lengths >= _LINE_RECORDS - 2
    records = int(np.sum(lengths[long] + 2))
    if records < _LINE_MIN_RECORDS:
        return None
    present = int(np.isfinite(x).sum())
    where = ""
    if stamps is not None and len(stamps) == x.size:
        first_run = int(starts[long][0])
        where = (f", the first from {pd.Timestamp(stamps[first_run]):%Y-%m-%d %H:%M} "
                 f"({int(lengths[long][0]) + 2} records)")
    column = (columns or {}).get("nee", "nee")
    return (f"NEE (column {column!r}) lies on straight lines over {records} of its "
            f"{present} present records, in {int(long.sum())} run(s) of "
            f"{_LINE_RECORDS} or more records{where}: a measured flux's random error "
            "sets each record apart from the line through its neighbours, so these look "
            "like gaps filled by linear interpolation (a logger's or spreadsheet's fill, "
            "or a gap-filled column): map the measured NEE, with its gaps left empty, so "
            "that they are filled and their uncertainty counted")


#: Jump [K] from the records beside a run of exact zeros, on both sides, that marks the
#: zeros as a logger's "no value": 2 m air temperature changes by more than 5 K within a
#: half-hour only at a front's passage or in a storm's downdraft (m), and then does not
#: return within the next record; a soil changes more slowly still (see
#: :data:`fluxpart.preflight._CURTAIN_JUMP`). Our choice.
_ZERO_JUMP = 5.0
#: Runs of such zeros needed before the column is named (a single one could be a typo or
#: a reboot). Our choice.
_ZERO_RUNS = 3


#: Records per day of consecutive records in which the air and soil temperature columns
#: must read the same value (to the coarser column's written resolution) to be named as one
#: sensor written twice [days] (round mistakes24). Our choice: a day of records holds a
#: whole daily cycle, over which the soil's damped and delayed cycle parts from the air's
#: (Campbell & Norman 1998, ch. 8 (m)).
SAME_TEMPERATURE_DAYS = 1.0
#: Distinct values a run of equal records needs: two columns at one value or two (a soil
#: and an air both at 0 °C in a thaw written to whole degrees, or two dead probes) are
#: not a copy of a moving temperature. Our choice.
_SAME_MIN_DISTINCT = 5


def _resolution(values: np.ndarray) -> float:
    """The smallest step between the distinct present values of a column [its unit]."""
    distinct = np.unique(values[np.isfinite(values)])
    steps = np.diff(distinct)
    steps = steps[steps > 1e-9]
    return float(steps.min()) if steps.size else 0.0


def same_temperature_columns(tair, tsoil, stamps, interval_minutes: float,
                             columns=None) -> str | None:
    """A message where air and soil temperature read the same value for a day or more.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [°C] (NaN = missing), consecutive
        records of one interval.
    stamps : pandas.DatetimeIndex
        Interval starts of the records, to name the runs.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where no run of :data:`SAME_TEMPERATURE_DAYS` of records
        with both present reads equal (within half the coarser column's written
        resolution) with enough distinct values.

    Notes
    -----
    Air at screen height and soil a few centimetres down are two media: conduction damps
    the soil's daily cycle by exp(-z / d) and delays it by z / d radians (damping depth d
    about 0.1 m; Campbell & Norman 1998, ch. 8 (m)), so the two columns cross twice a day
    and part again, and two probes read to 0.01-0.1 K agree in their last digit only by
    chance, for a record or a few. A day of consecutive records equal value for value,
    through a moving daily cycle, is one sensor written under both headers: a logger
    program mapping one channel twice, or a column copied over the other in a spreadsheet
    after a probe failed. Nothing else sees it: the copy passes every range, and a copy
    of the air as soil makes the soil swing like the air, which the swap rule
    (:func:`swapped_temperatures`) does not call swapped. On the invented grassland
    example the air column overwritten with the soil's from July moved nighttime GPP and
    Reco by -120 g C m-2 and daytime GPP by -120 g C m-2, named only as a disagreement of
    the two partitionings about the respiration temperature.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    a = np.asarray(tair, dtype=float)
    b = np.asarray(tsoil, dtype=float)
    both = np.isfinite(a) & np.isfinite(b)
    per_day = _records_per_day(interval_minutes)
    needed = int(np.ceil(SAME_TEMPERATURE_DAYS * per_day))
    if int(both.sum()) < needed:
        return None
    tolerance = 0.5 * max(_resolution(a), _resolution(b)) + 1e-9
    positions = np.flatnonzero(both)
    equal = np.abs(a[positions] - b[positions]) <= tolerance
    starts, lengths = gap_runs(equal)
    runs = []
    for start, length in zip(starts, lengths, strict=True):
        if length < needed:
            continue
        values = a[positions[start:start + length]]
        if np.unique(values).size < _SAME_MIN_DISTINCT:
            continue
        runs.append((int(positions[start]), int(positions[start + length - 1]), int(length)))
    if not runs:
        return None
    names = columns or {}
    first, last, _ = max(runs, key=lambda run: run[2])
    records = sum(run[2] for run in runs)
    more = f" in {len(runs)} runs" if len(runs) > 1 else ""
    index = pd.DatetimeIndex(stamps)
    return (f"air temperature (column {names.get('tair', 'tair')!r}) and soil temperature "
            f"(column {names.get('tsoil', 'tsoil')!r}) read the same value, record for "
            f"record, in {records} records{more} (the longest "
            f"{index[first]:%Y-%m-%d %H:%M} .. {index[last]:%Y-%m-%d %H:%M}): the soil's "
            "daily cycle is damped and delayed below the air's, so two probes never agree "
            "so long; one sensor is written under both headers (a logger channel mapped "
            "twice, or a column copied over the other): map each column to its own sensor, "
            "or blank the copied values in a copy of the file")


def zero_coded_temperature(values, name: str, stamps=None, columns=None) -> str | None:
    """A message where a temperature drops to exactly 0 and back by jumps, or None.

    Parameters
    ----------
    values : array_like
        Temperature of each record [°C] (NaN = missing), consecutive records.
    name : str
        Canonical name of the column (``"tair"`` or ``"tsoil"``).
    stamps : pandas.DatetimeIndex, optional
        Interval starts, to name the first run.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than 3 runs of exact zeros are entered and
        left by jumps of more than 5 K.

    Notes
    -----
    0 °C is a real temperature, so a logger that writes 0 for a lost value passes every
    range. Heat capacity keeps the air at 2 m from changing by more than a few K within a
    half-hour, save a front or a downdraft (m), and conduction keeps a soil slower still
    (Campbell & Norman 1998, ch. 8 (m)); a run of records at exactly 0 whose records on
    both sides lie more than 5 K from it is a value written for "missing". Three such
    runs name the column: the zeros enter the gap filling and the respiration and light
    responses as measured (on the example site, 3 % of the air temperature written 0 moved
    daytime GPP by -82 g C m-2 without a word). Runs of a day or more are also named by
    the stuck-sensor check.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    x = np.asarray(values, dtype=float)
    if x.size < 3:
        return None
    zero = x == 0.0
    starts, lengths = gap_runs(zero)
    ends = starts + lengths                           # run of zeros: x[start:end]
    inside = (starts > 0) & (ends < x.size)
    starts, ends = starts[inside], ends[inside]
    if starts.size < _ZERO_RUNS:
        return None
    before, after = x[starts - 1], x[ends]
    with np.errstate(invalid="ignore"):
        jumped = (np.abs(before) > _ZERO_JUMP) & (np.abs(after) > _ZERO_JUMP)
    count = int(jumped.sum())
    if count < _ZERO_RUNS:
        return None
    records = int(np.sum(ends[jumped] - starts[jumped]))
    where = ""
    if stamps is not None and len(stamps) == x.size:
        where = f", the first at {pd.Timestamp(stamps[int(starts[jumped][0])]):%Y-%m-%d %H:%M}"
    column = (columns or {}).get(name, name)
    return (f"{name} (column {column!r}) drops to exactly 0 and back by more than "
            f"{_ZERO_JUMP:g} K on both sides {count} times ({records} records{where}): a "
            "temperature does not jump so within a record, so 0 looks like the logger's "
            "code for a missing value: blank those cells (or write the file's missing "
            "code there) in a copy of the file, or they enter the fits as measured ([input] "
            "missing = [0] would also blank the true zeros of Rg, VPD and NEE)")


#: Days of consecutive records with NEE present and accepted by the site's flag beyond
#: which the column is named as already gap-filled or unscreened [1]. Measured NEE loses
#: records every few days to rain on the sensors, calibrations, power and the quality
#: tests of each half-hour: tower records keep about 65 % of their half-hours on average
#: (Falge et al. 2001 (m)), and none keeps weeks without a single loss. Two months, our
#: choice, over 30 times the longest run (1.9 days) of 120 generated site-years with
#: 30-70 % of records missing; random losses as rare as 0.1 % of records make a run of two
#: months likely, which no screened tower record reaches.
GAPLESS_DAYS = 60.0


#: Share of a run of present NEE values the site's flag must reject for the run to count
#: as screened [1] (round mistakes23). A tower's own quality tests reject an order of
#: ten percent of its half-hours and more (of the 35 % of records lost on average,
#: Falge et al. 2001 (m)), so a flag passing 99 % of two months of values without one
#: missing value is a flag of the raw values beside a gap-filled column (the fills
#: unmarked) or no screening at all. Our choice, by the same argument as
#: :data:`GAPLESS_DAYS`: a handful of flagged records must not hide two months of fills.
_FEW_REJECTED = 0.01


def _nearly_unflagged_run(nee: np.ndarray, rejected, needed: int):
    """(start, length, rejected count) of the longest run of present NEE of `needed` or
    more records whose flag rejects under :data:`_FEW_REJECTED` of them, or None."""
    if rejected is None:
        return None
    rejected = np.asarray(rejected, dtype=bool)
    starts, lengths = gap_runs(np.isfinite(nee))
    best = None
    for start, length in zip(starts.tolist(), lengths.tolist(), strict=True):
        if length < needed or (best is not None and length <= best[1]):
            continue
        flagged = int(rejected[start:start + length].sum())
        if flagged < _FEW_REJECTED * length:
            best = (start, length, flagged)
    return best


def _nearly_complete_window(kept: np.ndarray, needed: int):
    """(start, lost count) of the window of `needed` consecutive records losing the fewest
    (missing or flag-rejected), where they are under :data:`_FEW_REJECTED` of it, or None
    (round mistakes31: a fill that leaves a record blank every few days)."""
    if kept.size < needed:
        return None
    lost = np.concatenate([[0], np.cumsum(~kept, dtype=np.int64)])
    counts = lost[needed:] - lost[:-needed]
    start = int(np.argmin(counts))
    if counts[start] >= _FEW_REJECTED * needed:
        return None
    return start, int(counts[start])


def gapless_nee(nee, interval_minutes: float, stamps=None, rejected=None,
                columns=None) -> str | None:
    """A message where NEE has no gap over two months of records, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record as read [µmol m-2 s-1] (NaN = missing), consecutive records.
    interval_minutes : float
        Record interval [min].
    stamps : pandas.DatetimeIndex, optional
        Interval starts, to name the run.
    rejected : array_like of bool, optional
        Records the site's own quality flag rejects (a gap too).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where the longest run of present, accepted NEE is
        shorter than :data:`GAPLESS_DAYS`.

    Notes
    -----
    An eddy-covariance record loses half-hours to rain, dew and snow on the sensors,
    calibrations, power and data failures, and the quality tests of each interval
    (stationarity, developed turbulence; Foken & Wichura 1996 (m)): tower records keep
    about 65 % of their half-hours on average (Falge et al. 2001 (m)). A column present
    and accepted in every record for two months is a gap-filled column (an earlier
    processing's filled NEE mapped as the measured one) or raw fluxes without their
    quality screening. Either way the pipeline treats filled or unscreened values as
    measurements: on the example site, its own filled NEE mapped as measured moved GPP
    by -32 and Reco by -34 g C m-2 and shrank their stated 1-sigma uncertainty from 14.8
    to 7.6 and from 22.3 to 8.0 g C m-2; a mean-diurnal-course fill moved NEE by -16
    and GPP by -112 g C m-2. A fill that leaves a record blank here and there (where its
    window held too few values) breaks every run, so two months losing under
    :data:`_FEW_REJECTED` of their records (missing or rejected) are named too (round
    mistakes31: such a mean-diurnal-course fill of the demo's year, 114 records left
    blank, moved NEE by -14.9, nighttime GPP by -112.8 and Reco by -127.6 g C m-2,
    silent). Only warns: a site that truly lost nothing would be told to check a column
    that is right.

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69 (m).
    Foken, T., & Wichura, B. (1996). Tools for quality assessment of surface-based flux
    measurements. Agricultural and Forest Meteorology 78, 83-105 (m).
    """
    x = np.asarray(nee, dtype=float)
    if interval_minutes <= 0 or x.size == 0:
        return None
    kept = np.isfinite(x)
    if rejected is not None:
        kept &= ~np.asarray(rejected, dtype=bool)
    needed = int(math.ceil(GAPLESS_DAYS * 1440.0 / interval_minutes))
    if int(kept.sum()) < needed:
        return None
    starts, lengths = gap_runs(kept)
    ends = starts + lengths
    longest = int(np.argmax(lengths))
    accepted = "present and accepted in every one of"
    if lengths[longest] < needed:
        found = _nearly_unflagged_run(x, rejected, needed)
        if found is not None:
            start, length, flagged = found
            accepted = (f"present in every one of, and the site's flag rejects only "
                        f"{flagged} of,")
        else:
            window = _nearly_complete_window(kept, needed)
            if window is None:
                return None
            (start, lost), length = window, needed
            accepted = (f"missing or rejected by the site's flag in only {lost} of")
        starts, ends, longest = np.array([start]), np.array([start + length]), 0
        lengths = np.array([length])
    days = lengths[longest] * interval_minutes / 1440.0
    span = ""
    if stamps is not None and len(stamps) == x.size:
        first = pd.Timestamp(stamps[int(starts[longest])])
        last = pd.Timestamp(stamps[int(ends[longest]) - 1])
        span = f" ({first:%Y-%m-%d %H:%M} .. {last:%Y-%m-%d %H:%M})"
    column = (columns or {}).get("nee", "nee")
    gapless = ("without a gap" if accepted.startswith("present")
               else "without a gap of more than a few records")
    return (f"NEE (column {column!r}) is {accepted} "
            f"{int(lengths[longest])} consecutive records{span}, {days:.0f} days {gapless}"
            ": measured NEE loses records every few days (rain, calibrations, power, "
            "the quality tests of each interval; towers keep about 65 % of them), so this "
            "looks like a gap-filled column mapped as the measured one (its filled values "
            "would count as measurements, their uncertainty left out) or raw fluxes without "
            "their quality flag: map the measured NEE with its gaps empty, and its flag as "
            "nee_flag")


#: Largest departure of the median of (RH / 100) VPD / (e_s(tair) (1 - RH / 100)) from 1
#: that marks the tair column as the dew point: the identity below holds to the written
#: digits (a few tenths of a percent at the usual resolutions). Our choice.
_DEW_POINT_IDENTITY = 0.03
#: Smallest median departure of VPD / (e_s(tair) (1 - RH / 100)) from 1 needed beside
#: it, so that a tair that fits VPD and RH (ratio 1) is never named. Our choice.
_DEW_POINT_MISFIT = 0.15
#: VPD implied by RH and tair [hPa] a record needs to be judged (dry enough that the
#: ratio is not noise over a near-saturated record).
_DEW_POINT_MIN_VPD = 2.0


def dew_point_as_tair(tair, rh, vpd, columns=None) -> str | None:
    """A message where the tair column holds the dew point, or None.

    Parameters
    ----------
    tair : array_like
        The column mapped as air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        VPD column [hPa], as the file gives it.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where VPD fits e_s(tair) (1 - RH / 100), or the dew-point
        identity does not hold, or fewer than 48 records are dry enough to judge.

    Notes
    -----
    With vapour pressure e, air temperature T and dew point Td, RH = 100 e / e_s(T),
    VPD = e_s(T) - e and e_s(Td) = e by definition of the dew point (Campbell & Norman
    1998, ch. 3 (m)). Where the tair column is Td and the VPD column was written from the
    true T, the VPD computed from the columns, e_s(Td) (1 - RH / 100) = e (1 - RH / 100),
    equals (RH / 100) VPD exactly, while it falls short of VPD by the factor RH / 100. A
    median of (RH / 100) VPD over the computed value within 3 % of 1 together with a
    median of VPD over it more than 15 % from 1 names the column: respiration and the
    light response would read temperatures several K too low (on the example site the dew
    point mapped as tair moved GPP by -122 and Reco by -119 g C m-2 without a word). A
    file without a VPD column, or with one written from the dew point itself, cannot
    show this.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    """
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if not tair.size == rh.size == vpd.size:
        return None
    with np.errstate(invalid="ignore", over="ignore"):
        computed = vpd_from_rh(rh, tair)
        usable = (np.isfinite(computed) & np.isfinite(vpd) & np.isfinite(rh)
                  & (computed > _DEW_POINT_MIN_VPD) & (vpd > 0))
    if int(usable.sum()) < 48:
        return None
    misfit = float(np.median(vpd[usable] / computed[usable]))
    identity = float(np.median(rh[usable] / 100.0 * vpd[usable] / computed[usable]))
    if not (abs(identity - 1.0) <= _DEW_POINT_IDENTITY
            and abs(misfit - 1.0) > _DEW_POINT_MISFIT):
        return None
    names = columns or {}
    return (f"air temperature (column {names.get('tair', 'tair')!r}) looks like the dew "
            f"point: the VPD column ({names.get('vpd', 'vpd')!r}) is a median {misfit:.2f} "
            "times e_s(tair) (1 - RH / 100), while RH / 100 times it matches that to "
            f"{100 * abs(identity - 1.0):.1f} % (the identity e_s(dew point) = vapour pressure, "
            f"over {int(usable.sum())} records): map the air temperature as tair, or respiration "
            "and the light response read temperatures several K too low")


#: Smallest delay [min] of the tair column's daily course behind the air temperature
#: that VPD and RH imply before :func:`delayed_tair` names it: heat conduction delays
#: the soil's daily cycle by z / d radians at depth z (d about 0.1 m, Campbell & Norman
#: 1998, ch. 8 (m); 1.9 h at 5 cm, 3.8 h at 10 cm behind the surface, which itself peaks
#: near the air), while air-temperature sensors answer within minutes. 90 min leaves a
#: sensor below a canopy or in a slow shield well inside.
_DELAY_MIN_MINUTES = 90
#: Longest delay searched [min]: a soil at 15 cm is about 6 h behind the surface.
_DELAY_MAX_MINUTES = 8 * 60
#: Correlation the delayed daily courses must reach [1], and by how much more than in
#: the same record (a sinusoid 90 min late still correlates cos(22.5 deg) = 0.92 at no
#: delay): a diurnal course that clearly fits only later.
_DELAY_MIN_CORRELATION = 0.8
_DELAY_MIN_GAIN = 0.05
#: Highest RH [%] of the records whose implied temperature is used: near saturation a
#: probe's few per cent of RH error is most of the deficit (common practice).
_DELAY_MAX_RH = 90.0


def delayed_tair(tair, rh, vpd, interval_minutes: float, columns=None) -> str | None:
    """A message where the tair column's daily course trails the humidity's, or None.

    Parameters
    ----------
    tair : array_like
        The column mapped as air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa], as the file gives it.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the tair column's daily course fits the implied
        air temperature at no delay or less than 90 min late (always so for a VPD
        derived from RH and tair), or too few records judge.

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) holds at one moment (Campbell & Norman 1998, ch. 3
    (m)), so VPD and RH written by a humidity probe imply the air temperature T of
    each record: e_s(T) = VPD / (1 - RH / 100), inverted in the Magnus form of
    :func:`~fluxpart.variables.saturation_vapour_pressure` (records of RH up to 90 %).
    Both temperatures less their 24-h running mean are correlated with the tair column
    k records later, k up to 8 h. A soil temperature mapped as tair trails the air by
    hours: heat conduction damps and delays the daily cycle with depth, by z / d radians
    (d = (2 kappa / omega)^1/2, about 0.1 m; Campbell & Norman 1998, ch. 8 (m)). Named
    where the best k is 90 min or more, its correlation 0.8 or more and 0.05 above the
    same record's. On the example site the soil column mapped as tair (tsoil unmapped)
    moved nighttime GPP by -242, Reco by -244 and daytime GPP by -200 g C m-2 without a
    word: respiration and the light response read a damped, late temperature. A tair
    column of the same sensor shifted by whole records is :func:`tair_lag`'s finding; a
    shallow probe (2 cm, under an hour) is not named, nor any file without both
    humidity columns.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 and 8 (m).
    """
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if not tair.size == rh.size == vpd.size or interval_minutes <= 0:
        return None
    per_day = _records_per_day(interval_minutes)
    if per_day < 4 or tair.size < 30 * per_day:
        return None
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        usable = (np.isfinite(rh) & np.isfinite(vpd) & (rh >= 1.0) & (rh <= _DELAY_MAX_RH)
                  & (vpd > 0))
        saturation = np.where(usable, vpd / (1.0 - rh / 100.0), np.nan)
        implied = saturation_temperature(saturation)
    implied[~np.isfinite(implied) | (implied < -60) | (implied > 60)] = np.nan
    a_implied = daily_anomaly(implied, per_day)
    a_tair = daily_anomaly(tair, per_day)
    most = int(_DELAY_MAX_MINUTES // interval_minutes)
    scores = {}
    for k in range(0, most + 1):
        later = np.full(tair.size, np.nan)
        later[:tair.size - k] = a_tair[k:]
        scores[k] = _correlation(later, a_implied, minimum=15 * per_day)[0]
    same = scores[0]
    if not np.isfinite(same):
        return None
    best = max((k for k in scores if np.isfinite(scores[k])), key=lambda k: scores[k])
    delay = best * interval_minutes
    if (delay < _DELAY_MIN_MINUTES or scores[best] < _DELAY_MIN_CORRELATION
            or scores[best] - same < _DELAY_MIN_GAIN):
        return None
    names = columns or {}
    return (f"air temperature (column {names.get('tair', 'tair')!r}) follows the air "
            f"temperature that VPD ({names.get('vpd', 'vpd')!r}) and RH "
            f"({names.get('rh', 'rh')!r}) imply {delay / 60:g} h later (correlation of "
            f"their daily courses {scores[best]:.2f} there, {same:.2f} in the same record): "
            "air-temperature sensors answer within minutes, while a soil temperature "
            "trails the air by hours; map the air temperature as tair (a soil "
            "temperature as tsoil), or respiration and the light response read a damped, "
            "late temperature (or align a logger whose clock is that far off)")

def delayed_tair_in_a_year(tair, rh, vpd, stamps, interval_minutes: float,
                           columns=None) -> str | None:
    """:func:`delayed_tair` judged in each calendar year of a record of several years.

    Parameters
    ----------
    tair, rh, vpd : array_like
        As for :func:`delayed_tair` [°C, %, hPa].
    stamps : pandas.DatetimeIndex
        Start of each record (local standard time), same length.
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The first named year's message, prefixed by the years named; None where the
        record lies in one calendar year or no year's tair trails the humidity's.

    Notes
    -----
    A file of several years whose logger program changed between them (columns added or
    re-ordered at a new year) can hold the soil temperature in the column mapped as tair
    for one year only; over the whole record the correct year's tair dilutes the soil's
    delay below :func:`delayed_tair`'s correlation, and the budget of that year moves by
    hundreds of g C m-2 (an invented two-year grassland record with its second year's air
    and soil columns exchanged: that year's nighttime GPP and Reco -225, daytime GPP
    -192 g C m-2, silent before; round mistakes21). Each calendar year with at least the
    30 days :func:`delayed_tair` needs is judged by the same rule (90 min or more, a
    correlation of 0.8 or more and 0.05 above the same record's), so a year of a
    correct sensor is as quiet as a one-year file of it.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 and 8 (m).
    """
    stamps = pd.DatetimeIndex(stamps)
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if not tair.size == rh.size == vpd.size == len(stamps) or tair.size == 0:
        return None
    years = stamps.year.to_numpy()
    distinct = np.unique(years)
    if distinct.size < 2:
        return None
    named = {}
    for year in distinct:
        inside = years == year
        text = delayed_tair(tair[inside], rh[inside], vpd[inside], interval_minutes, columns)
        if text:
            named[int(year)] = text
    if not named:
        return None
    first = min(named)
    listed = ", ".join(str(year) for year in sorted(named))
    where = (f"in {listed} only" if len(named) == 1 else f"in {listed}; in {first}")
    return (f"{where} (not the whole record: were the columns re-ordered between years? "
            f"correct that year in a copy of the file): {named[first]}")


#: Lowest RH [%] of the records that judge :func:`vapour_pressure_as_vpd`: above 60 %
#: the vapour pressure e exceeds the deficit e_s - e by 1.5 times or more and e_s
#: exceeds it by 2.5 times or more (RH / (100 - RH), 100 / (100 - RH)), so neither can
#: pass for the deficit within a probe's error.
_VP_MIN_RH = 60.0
#: Highest RH [%] of those records: near saturation a humidity probe's error of a few
#: per cent RH (common practice, capacitive probes are specified to about 2-3 % RH (m))
#: is a large share of the small deficit.
_VP_MAX_RH = 95.0
#: Median absolute log ratio [1] within which the VPD column is taken to be e or e_s
#: (10 %: two separate probes' humidity and temperature errors, a few per cent RH and
#: a few tenths of a K, move e by less).
_VP_FIT = 0.10
#: Smallest median absolute log ratio [1] of the VPD column against the deficit computed
#: from RH and tair before it is named (a factor of 1.35, beyond the 10 % above).
_VP_MISFIT = 0.30
#: Records needed to judge [records]: a week of half-hours.
_VP_MIN_RECORDS = 7 * 48


def vapour_pressure_as_vpd(tair, rh, vpd, columns=None) -> str | None:
    """A message where the VPD column holds the (saturation) vapour pressure, or None.

    Parameters
    ----------
    tair : array_like
        Air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa], after its declared unit.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where the column fits the deficit e_s(T) (1 - RH / 100)
        at least as well as it fits e or e_s, or fewer than a week of records lie
        between 60 and 95 % RH.

    Notes
    -----
    With vapour pressure e and saturation vapour pressure e_s(T), RH = 100 e / e_s(T)
    and VPD = e_s(T) - e (Campbell & Norman 1998, ch. 3 (m)). Loggers often write e
    (or e_s) beside RH and the deficit, and a column headed "VP" or "e_sat" mapped as
    VPD passes every range: it has the unit and magnitude of VPD. Over records of 60 to
    95 % RH, e is RH / (100 - RH) = 1.5 to 19 times the deficit and e_s is 100 / (100 -
    RH) = 2.5 to 20 times it, a factor that changes with RH from record to record. The
    column is named where its median absolute log ratio to e (or e_s) computed from RH
    and tair is within 0.10 while its ratio to the computed deficit is more than 0.30
    from 1 in the same measure, and more than three times as scattered about its own
    median as the ratio to e (or e_s) is (a deficit in a wrong unit has one constant
    ratio, which the reader's unit checks name). The light response's VPD limitation
    (Lasslop et al. 2010) would read humid hours as dry ones.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    Lasslop, G., et al. (2010). Separation of net ecosystem exchange into assimilation
    and respiration using a light response curve approach. Global Change Biology, 16,
    187-208.
    """
    tair, rh, vpd = (np.asarray(v, dtype=float) for v in (tair, rh, vpd))
    if not tair.size == rh.size == vpd.size:
        return None
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        saturation = saturation_vapour_pressure(tair)
        deficit = vpd_from_rh(rh, tair)
        usable = (np.isfinite(saturation) & np.isfinite(deficit) & np.isfinite(vpd)
                  & (rh >= _VP_MIN_RH) & (rh <= _VP_MAX_RH) & (vpd > 0) & (deficit > 0))
        if int(usable.sum()) < _VP_MIN_RECORDS:
            return None
        column = np.log(vpd[usable])
        to_deficit = column - np.log(deficit[usable])
        candidates = {"the vapour pressure e": saturation[usable] * rh[usable] / 100.0,
                      "the saturation vapour pressure e_s(tair)": saturation[usable]}
        misfit = float(np.median(np.abs(to_deficit)))
        scatter = float(np.median(np.abs(to_deficit - np.median(to_deficit))))
    if misfit <= _VP_MISFIT:
        return None
    for label, values in candidates.items():
        with np.errstate(invalid="ignore", divide="ignore"):
            fit = float(np.median(np.abs(column - np.log(values))))
        if fit <= _VP_FIT and scatter > 3.0 * fit:
            names = columns or {}
            return (f"the VPD column ({names.get('vpd', 'vpd')!r}) looks like {label}, not "
                    f"the deficit: at 60-95 % RH it matches {label} (from air temperature "
                    f"{names.get('tair', 'tair')!r} and RH {names.get('rh', 'rh')!r}) to "
                    f"a median {100 * math.expm1(fit):.1f} %, while it is a median "
                    f"{100 * math.expm1(misfit):.0f} % off e_s(tair) (1 - RH / "
                    f"100) ({int(usable.sum())} records); map the deficit as vpd, or leave "
                    "vpd unmapped to derive it from rh and tair, or the light response "
                    "reads humid hours as dry ones")
    return None

#: Most distinct values a column mapped as a measured variable may hold, all whole
#: numbers from 0 to :data:`_FLAG_HIGHEST`, before it is named as a flag [1]. Quality
#: flag schemes of flux processing grade a record in three to five classes (0/1/2 of
#: Mauder & Foken 2004 (m), 0-9 step schemes of Foken et al. 2004 (m)): common practice.
_FLAG_MOST_VALUES = 5
#: Largest value of a flag code [1] (single-digit codes; common practice, see above).
_FLAG_HIGHEST = 9
#: Present values needed to judge [records]: 30 days of half-hours, so a short record
#: or a sensor logged at a coarse resolution for a few days is not judged.
_FLAG_MIN_VALUES = 30 * 48 // 2


def flag_as_measurement(values, name: str, columns=None) -> str | None:
    """A message where a column mapped as a measured variable holds flag codes, or None.

    Parameters
    ----------
    values : array_like
        The column as read, in its canonical unit (u* [m s-1], temperatures [°C], VPD
        [hPa], RH [%], Rg [W m-2], NEE [µmol m-2 s-1]).
    name : str
        Its canonical name.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where the column takes more than five distinct values,
        a negative value, values that are not whole multiples (0 to 9) of its smallest
        positive value (a flag read in a declared unit, 0 and 10 hPa for a flag 0/1
        under ``vpd = "kPa"``, is such a multiple), one value only (a stuck sensor,
        named elsewhere), or fewer than 720 values are present.

    Notes
    -----
    A measured u*, temperature, humidity, radiation or flux varies continuously: over
    a month of records its values, at the resolution any logger writes (0.01 m s-1,
    0.1 K, 1 W m-2), spread over tens to hundreds of distinct values with the weather's
    daily and synoptic course. A column holding two to five distinct whole numbers
    between 0 and 9 is a quality flag (the 0/1/2 classes of Mauder & Foken 2004 (m)),
    a class or a count beside the measured column, mapped by a slip of the column
    name: on the example site a u* flag (2 below 0.1 m s-1, 1 below 0.2, else 0)
    mapped as ``ustar`` moved annual NEE by -79 g C m-2 and Reco by -247 g C m-2,
    named only as a sensor "stuck" at 2. The rule is a warning, not a refusal: a
    coarse sensor at a place whose value hardly changes (a frozen deep soil logged in
    whole K) could in principle read so.

    References
    ----------
    Mauder, M., & Foken, T. (2004). Documentation and instruction manual of the eddy
    covariance software package TK2. Arbeitsergebnisse 26, Univ. Bayreuth (m).
    Foken, T., et al. (2004). Post-field data quality control. In Handbook of
    Micrometeorology, Kluwer, 181-208 (m).
    """
    values = np.asarray(values, dtype=float)
    present = values[np.isfinite(values)]
    if present.size < _FLAG_MIN_VALUES:
        return None
    distinct = np.unique(present)
    if not 2 <= distinct.size <= _FLAG_MOST_VALUES or distinct[0] < 0:
        return None
    # codes read in a declared unit (a flag 0/1 under vpd = "kPa" reads 0 and 10 hPa)
    # are whole multiples of the smallest positive one
    step = distinct[distinct > 0][0]
    codes = distinct / step
    if not (np.allclose(codes, np.round(codes), rtol=0.0, atol=1e-9)
            and codes[-1] <= _FLAG_HIGHEST):
        return None
    shown = ", ".join(f"{value:g}" for value in distinct)
    column = (columns or {}).get(name, name)
    return (f"column {column!r} ({name}) holds only the values {shown} in its "
            f"{present.size} values: a quality flag, class or count, not a measured {name}, "
            "which takes many values over a month; map the measured column as "
            f"{name} (a flag belongs under nee_flag)")


#: Slope of the turbulent flux's anomalies on the storage term's midway between the two
#: physical cases (Notes of :func:`storage_in_turbulent_flux`): -1 for a turbulent flux,
#: 0 for a flux that already holds storage [1].
_STORAGE_SLOPE_MIDWAY = -0.5
#: Standard errors by which the slope must stand above the midway before the column is
#: named (one-sided p ~ 0.001; the blocks' spread, not the records', so correlated
#: records do not inflate the evidence).
_STORAGE_MIN_Z = 3.0
#: Slope below which (by three standard errors) the storage column is named as too small
#: for the turbulent flux: -1 for a storage term in the flux's unit; a profile that misses
#: part of the air below the sensor steepens it, but one that holds under a fifth of the
#: store's change is no storage measurement, while a unit slip of mg CO2 (44.01 g mol-1,
#: a factor of 22.7) or mg C (83.3) read as µmol steepens it far beyond (our choice).
_STORAGE_SLOPE_TOO_SMALL = -5.0
#: Median |daily mean| of the storage column over its median within-day standard
#: deviation above which it is named as a level (a store or a running sum), not the
#: store's change [1]. The change of a store sums over a day to the day's change of the
#: store, a fraction of what a night adds and a morning removes: below 0.5 on the invented
#: mass balance of the tests (about 0.1), 0.03 on the maize example's column, while a
#: running sum of it drifts (29 on the maize example) and a store of 400 µmol mol-1 over
#: 2 m is thousands of times its swing (our choice, four times the largest flux value).
_STORAGE_LEVEL_RATIO = 2.0
#: Correlation (absolute, record by record) of the storage column with the flux column
#: above which the storage column is named as a flux [1]. The storage term fills the store
#: at night, empties it in the morning and stays near 0 at midday, when the flux's uptake
#: is largest (Finnigan 2006), so it cannot follow the flux's diurnal course: within
#: ±0.43 on every invented storage column measured (the tests' vented store, the maize
#: example's +0.16, the storage columns of the second, tenth, eleventh, thirteenth and
#: seventeenth trials), while a flux column holding the storage term correlates with the
#: turbulent flux at 0.94-1.00 on the same records (round mistakes38; our choice, between).
_STORAGE_FLUX_CORRELATION = 0.8
#: Days of paired records the correlation needs; as the storage size check's 14.
_STORAGE_FLUX_MIN_DAYS = 14
#: A storage column moving against the flux is a flux (NEP) only where the NEE it forms
#: (flux + column) stays below this share of the column's size at night (medians over
#: records 00:00-04:00 local standard time). Where the store's exchange dominates the
#: flux (a tall canopy outside the growing season: the turbulent flux is NEE minus the
#: storage term), a genuine storage term correlates with the flux down to -0.93 (review44,
#: the tests' vented store in winter, no uptake) and the NEE formed is the ecosystem's
#: respiration, at night about the size of the storage term or more (the store fills
#: from it); a column of NEP forms the opposite of the storage term, about 0 at night
#: (-0.16 to -0.01 where the correlation passes -0.8). Our choice, halfway.
_STORAGE_NIGHT_SHARE = 0.5
#: Words of :func:`flux_as_storage`'s message (the reader keeps it before other causes).
FLUX_COPY_WORDS = "looks like a flux, not the storage term"
#: Blocks of days whose slopes give the spread, and the fewest such blocks judged; our
#: choice: 10 days hold several calm and several windy nights (weather changes over a
#: few days), and 8 blocks (80 days) give the spread of a slope from at least 7 degrees
#: of freedom.
_STORAGE_BLOCK_DAYS = 10
_STORAGE_MIN_BLOCKS = 8


def _storage_level_ratio(storage, stamps) -> float:
    """Median |daily mean| over the median within-day standard deviation of `storage`
    [1], over days with at least half their records; NaN with fewer than 8 such days."""
    series = pd.Series(np.asarray(storage, dtype=float), index=pd.DatetimeIndex(stamps))
    days = series.groupby(series.index.normalize())
    counts, sizes = days.count(), days.size()
    full = counts >= np.maximum(4, sizes.max() // 2)
    if int(full.sum()) < 8:
        return np.nan
    spread = float(np.median(days.std()[full]))
    if not spread > 0:
        return np.nan
    return float(np.median(np.abs(days.mean()[full])) / spread)


def storage_in_turbulent_flux(turbulent, storage, stamps, columns=None) -> str | None:
    """A message where the flux mapped as turbulent already holds the storage term, or None.

    Parameters
    ----------
    turbulent : array_like
        The column mapped as ``nee`` where a ``storage`` column is mapped too, taken as
        the turbulent flux [µmol m-2 s-1].
    storage : array_like
        The column mapped as ``storage``, the change of the CO2 stored below the sensor
        [µmol m-2 s-1].
    stamps : pandas.DatetimeIndex
        Start of each record (local standard time).
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text, one of (checked in this order): the storage column follows
        the flux record by record, a flux mapped as storage (:func:`flux_as_storage`;
        the reader refuses it); the storage column is a level, not a change (its daily means lie more than ``_STORAGE_LEVEL_RATIO``
        times its within-day spread from 0); it is too small for the turbulent flux
        (slope below ``_STORAGE_SLOPE_TOO_SMALL`` = -5 by three standard errors, e.g.
        mg CO2 read as µmol); it has the opposite sign (slope above +0.5 by three
        standard errors); the column mapped as nee already holds the storage term
        (slope above -0.5 by three standard errors). None where the turbulent column
        falls with the storage term as a turbulent flux does, the slope is not
        resolved, or fewer than ``_STORAGE_MIN_BLOCKS`` = 8 blocks of
        ``_STORAGE_BLOCK_DAYS`` = 10 days hold both columns.

    Notes
    -----
    NEE is the turbulent flux at the sensor plus the change of the CO2 stored below it,
    NEE = F_c + S (Finnigan 2006). The store fills on calm nights and empties when
    turbulence returns: what stays below the sensor is missing from F_c and is S, so
    from one night to the next F_c and S trade against each other while NEE, set by the
    ecosystem's respiration and uptake, does not follow the turbulence. Taken as
    anomalies from each hour of the day's mean within its month (which removes the
    shared diurnal and seasonal course), a turbulent flux therefore falls with the
    storage term, slope about -1; a column that already holds storage (NEE, or a flux
    written with its storage added) does not, slope about 0, and adding the storage
    column to it counts the store twice: a night's accumulation moves to the morning
    twice over, which partitioning reads as more respiration by night and more uptake
    by day (on the grassland example, nighttime and daytime GPP about +240 g C m-2 a
    year, measured by round mistakes20). The column is named where the slope stands
    three standard errors (from its spread over blocks of 10 days) above -0.5, midway
    between the two cases; where it stands that far above +0.5 (slope about +1), the
    storage column has the opposite sign, and the message says so instead. Where the
    store is small (a short canopy) or the storage column noisy, the slope is not
    resolved and no message is given. The slope is an instrumental-variable estimate:
    the turbulent flux's anomalies against the storage anomalies, each weighed by the
    sum of the storage anomalies of the records just before and after (records one
    interval apart only). The store fills and empties over hours, so its neighbours
    share its anomaly, while a storage column's own noise (a single-point
    concentration difference) is not shared; the ordinary least-squares slope is
    pulled towards 0 by that noise (errors in the regressor), and named a turbulent
    flux beside a storage column noisier than the store's changes as one already
    holding storage (invented records: slope -0.27 where the noise's standard deviation was
    1.5 times the store term's, -0.95 with the instrument).

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113 (NEE = turbulent flux + storage change).
    Wooldridge, J. M. (2010). Econometric Analysis of Cross Section and Panel Data, 2nd
    ed. MIT Press, ch. 5 (instrumental variables; measurement error in a regressor) (m).
    """
    copied = flux_as_storage(turbulent, storage, stamps, columns)
    if copied:
        return copied
    fitted = storage_slope(turbulent, storage, stamps)
    if fitted is None:
        return None
    slope, spread = fitted
    stamps = pd.DatetimeIndex(stamps)
    storage = np.asarray(storage, dtype=float)
    names = columns or {}
    flux, term = names.get("nee", "nee"), names.get("storage", "storage")
    level = _storage_level_ratio(storage, stamps)
    if level > _STORAGE_LEVEL_RATIO:
        return (f"the storage column ({term!r}) looks like a level, not a change: its daily "
                f"means lie {level:.0f} times its spread within the day away from 0, while "
                "the storage term (the change of the CO2 stored below the sensor) sums to "
                "about 0 over a day as the store fills at night and empties in the morning; "
                "a running sum of the storage term, or the store itself (concentration times "
                "height), reads like this: map the storage flux (its change per second, "
                "µmol m-2 s-1)")
    if np.isfinite(spread) and slope + _STORAGE_MIN_Z * spread < _STORAGE_SLOPE_TOO_SMALL:
        return (f"the storage column ({term!r}) looks about {-slope:.0f} times too small for "
                f"the turbulent flux in {flux!r}: a turbulent flux falls as the storage term "
                "rises from one night to the next by the same amount (slope about -1 on "
                f"their hour-of-day anomalies), here by {-slope:.1f} ± {spread:.1f} times it, "
                "so most of the store is missing from NEE; check the storage column's unit: "
                "mg CO2 m-2 s-1 read as µmol m-2 s-1 is 22.7 times too small (declare "
                "storage = \"mg CO2 m-2 s-1\" under [input.units])")
    if not np.isfinite(spread) or slope - _STORAGE_MIN_Z * spread <= _STORAGE_SLOPE_MIDWAY:
        return None
    evidence = ("a turbulent flux falls as the storage term rises from one night to the "
                "next (slope about -1 on their hour-of-day anomalies)")
    if slope - _STORAGE_MIN_Z * spread > -_STORAGE_SLOPE_MIDWAY:
        return (f"the storage column ({term!r}) looks like it has the opposite sign: "
                f"{evidence}, while {flux!r} rises with it (slope {slope:+.2f} ± "
                f"{spread:.2f}), so adding it takes the store away twice; the storage term "
                "is positive while CO2 accumulates below the sensor (check its sign "
                "convention)")
    return (f"the column mapped as nee ({flux!r}) looks like it already holds the "
            f"storage term in {term!r}: {evidence}, this one does not (slope "
            f"{slope:+.2f} ± {spread:.2f}), so adding the storage column counts the store "
            "twice; if the column is NEE (turbulent flux + storage), remove the storage "
            "mapping")


def flux_as_storage(turbulent, storage, stamps, columns=None) -> str | None:
    """A message where the storage column follows the flux record by record, or None.

    Parameters
    ----------
    turbulent, storage, stamps, columns
        As for :func:`storage_in_turbulent_flux`.

    Returns
    -------
    str or None
        The warning text where the absolute correlation of the two columns over their
        paired records exceeds ``_STORAGE_FLUX_CORRELATION`` = 0.8 on at least
        ``_STORAGE_FLUX_MIN_DAYS`` = 14 days of records: the storage column holds a flux
        (NEE, the turbulent flux itself, or NEP), and adding it counts the flux twice (on
        the maize example, NEE -490.8 -> -958.7 g C m-2, measured by round mistakes38).
        A negative correlation is named only where the NEE formed (flux + column) does
        not emit at night (its median over 00:00-04:00 local standard time at most
        ``_STORAGE_NIGHT_SHARE`` = 0.5 times the column's median size there): a storage
        term that rules a respiring flux (a tall canopy in winter) trades against it
        record by record too, and the two then form respiration (review44).
        None otherwise.

    Notes
    -----
    NEE is the turbulent flux plus the storage term (Finnigan 2006). The storage term is
    the change of the CO2 held below the sensor: positive while the store fills at night,
    negative while the morning's turbulence empties it, near 0 around midday, when the
    flux's uptake is largest. Its course over the day is therefore not the flux's, and the
    two correlate weakly (the constant's comment gives the figures), except where no
    uptake moves the flux and the store's exchange rules it: the turbulent flux is then
    respiration minus the storage term, correlating with it down to -0.93. A column that
    holds the flux correlates with the turbulent flux at nearly 1 (the storage term's
    share of its variance is small), and with the opposite sign where it is NEP, whose
    sum with the flux is the opposite of the storage term, about 0 at night, where NEE
    is respiration (a fact of the trade).

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    turbulent = np.asarray(turbulent, dtype=float)
    storage = np.asarray(storage, dtype=float)
    stamps = pd.DatetimeIndex(stamps)
    if not turbulent.size == storage.size == len(stamps) or turbulent.size < 3:
        return None
    paired = np.isfinite(turbulent) & np.isfinite(storage)
    step = float(np.median(np.diff(stamps.to_numpy()).astype("timedelta64[s]").astype(float)))
    if not step > 0 or paired.sum() * step < _STORAGE_FLUX_MIN_DAYS * 86400.0:
        return None
    flux, term = turbulent[paired], storage[paired]
    if not (np.std(flux) > 0 and np.std(term) > 0):
        return None
    correlation = float(np.corrcoef(flux, term)[0, 1])
    if not abs(correlation) > _STORAGE_FLUX_CORRELATION:
        return None
    night = pd.DatetimeIndex(stamps[paired]).hour < 4
    formed_at_night = float(np.median((flux + term)[night])) if night.any() else np.nan
    if correlation < 0 and formed_at_night > _STORAGE_NIGHT_SHARE * float(
            np.median(np.abs(term[night]))):
        return None           # the NEE formed emits at night: a store that rules the flux
    names = columns or {}
    flux_name, term_name = names.get("nee", "nee"), names.get("storage", "storage")
    if correlation > 0:
        sense, harm = "with", ("the storage term correlates with the flux within about "
                               "±0.4); adding it counts the flux twice")
    else:
        sense, harm = "against", (f"the NEE formed with it is {formed_at_night:+.2f} µmol "
                                  "m-2 s-1 at night (median, 00:00-04:00), where respiration "
                                  "emits); adding it cancels the flux, as NEP would")
    return (f"the storage column ({term_name!r}) {FLUX_COPY_WORDS}: it moves {sense} the "
            f"flux in {flux_name!r} record by record (correlation {correlation:+.2f} over "
            f"{int(paired.sum())} records), while the storage term fills the store at night, "
            "empties it in the morning and stays near 0 at midday, when the flux is largest "
            f"({harm}: map the storage flux (the change of the CO2 stored below the sensor) "
            "as storage, or, if the column mapped as nee is NEE already (turbulent flux + "
            "storage), remove the storage mapping")


def storage_slope(turbulent, storage, stamps) -> tuple[float, float] | None:
    """The slope of a flux's anomalies on the storage term's, and its standard error.

    Parameters
    ----------
    turbulent, storage, stamps
        As for :func:`storage_in_turbulent_flux`.

    Returns
    -------
    tuple of float or None
        The instrumental-variable slope [1] (about -1 for a turbulent flux, about 0 for a
        flux that already holds the storage term) and its standard error over blocks of
        ``_STORAGE_BLOCK_DAYS`` days; None where the lengths differ, fewer than
        ``_STORAGE_MIN_BLOCKS`` blocks hold both columns or the storage anomalies carry no
        weight (the Notes of :func:`storage_in_turbulent_flux` give the method).

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    Wooldridge, J. M. (2010). Econometric Analysis of Cross Section and Panel Data, 2nd
    ed. MIT Press, ch. 5 (instrumental variables) (m).
    """
    turbulent = np.asarray(turbulent, dtype=float)
    storage = np.asarray(storage, dtype=float)
    stamps = pd.DatetimeIndex(stamps)
    if not turbulent.size == storage.size == len(stamps) or turbulent.size < 3:
        return None
    usable = np.isfinite(turbulent) & np.isfinite(storage)
    if not usable.any():
        return None
    slot = (stamps.hour * 60 + stamps.minute).to_numpy()
    month = (stamps.year * 12 + stamps.month).to_numpy()
    frame = pd.DataFrame({"turbulent": np.where(usable, turbulent, np.nan),
                          "storage": np.where(usable, storage, np.nan),
                          "slot": slot, "month": month})
    means = frame.groupby(["month", "slot"])[["turbulent", "storage"]].transform("mean")
    anomaly_t = frame["turbulent"].to_numpy() - means["turbulent"].to_numpy()
    anomaly_s = frame["storage"].to_numpy() - means["storage"].to_numpy()
    # the instrument: the storage anomalies of the records just before and after, one
    # interval away (Notes: a storage column's own noise is not shared by its neighbours)
    times = stamps.asi8
    step = np.median(np.diff(times))
    adjacent = np.zeros(len(stamps), dtype=bool)
    adjacent[1:-1] = (times[1:-1] - times[:-2] == step) & (times[2:] - times[1:-1] == step)
    instrument = np.full(len(stamps), np.nan)
    instrument[1:-1] = anomaly_s[:-2] + anomaly_s[2:]
    paired = usable & adjacent & np.isfinite(instrument)
    if not paired.any():
        return None
    days = (stamps[paired] - stamps[paired][0]).days.to_numpy()
    products = pd.DataFrame({"ts": anomaly_t[paired] * instrument[paired],
                             "ss": anomaly_s[paired] * instrument[paired],
                             "block": days // _STORAGE_BLOCK_DAYS}).groupby("block").sum()
    total = float(products["ss"].sum())
    if len(products) < _STORAGE_MIN_BLOCKS or not total > 0:
        return None
    slope = float(products["ts"].sum() / total)
    # standard error of the ratio of sums over blocks (its linearisation: each block's
    # departure ts - slope ss over the total), n / (n - 1) for the slope fitted
    count = len(products)
    departures = (products["ts"].to_numpy() - slope * products["ss"].to_numpy()) / total
    spread = float(np.sqrt(count / (count - 1) * np.sum(departures**2)))
    return slope, spread


def slope_reads_turbulent(turbulent, storage, stamps) -> bool:
    """Whether the slope of :func:`storage_slope` resolves `turbulent` as a turbulent flux.

    Parameters
    ----------
    turbulent, storage, stamps
        As for :func:`storage_in_turbulent_flux`.

    Returns
    -------
    bool
        True where the slope stands ``_STORAGE_MIN_Z`` standard errors below the midway
        ``_STORAGE_SLOPE_MIDWAY`` (a turbulent flux falling with the storage term); False
        where it is not resolved or reads otherwise.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    fitted = storage_slope(turbulent, storage, stamps)
    if fitted is None or not np.isfinite(fitted[1]):
        return False
    slope, spread = fitted
    return slope + _STORAGE_MIN_Z * spread < _STORAGE_SLOPE_MIDWAY


#: Lowest potential radiation of the records the shading check compares [W m-2]; our
#: choice: above it the sun stands some 12° or more above the horizon at mid-latitudes,
#: where a clear sky lets through well over half of the top-of-atmosphere irradiance
#: (Campbell & Norman 1998, ch. 11 (m)).
_SHADE_MIN_POTENTIAL = 200.0
#: Records each half of the day needs in a cell (a month at one distance from solar
#: noon) for the cell to be judged; our choice: two thirds of a month's days.
_SHADE_MIN_RECORDS = 20
#: Percentiles of the clearness index (Rg over potential radiation) compared in a cell
#: [%]; our choice: the 90th stands for its clear sky, and the 75th must be dimmed as
#: much, so that a cloudy month whose few clear records all fell in one half (its 90th
#: percentile a matter of chance, its 75th alike in both halves) is not read as a shadow.
_SHADE_PERCENTILES = (90.0, 75.0)
#: Ratio of the dimmer half's clear-sky clearness to the brighter half's at or below
#: which a cell counts as shaded [1]; our choice: morning haze or dew on the dome dims a
#: clear morning by a tenth or two, a shadow on the sensor by half or more (diffuse light
#: alone is 10-20 % of a clear sky's global radiation; Campbell & Norman 1998, ch. 11
#: (m)).
_SHADE_RATIO = 0.6
#: Ratio of the dimmer half's brightest record to the brighter half's clear-sky clearness
#: at or below which a cell counts as shaded [1] (round falsealarm61). An obstacle blocks
#: the direct beam at that height and bearing of the sun on every day, so the sensor
#: sees the diffuse light alone, whose clearness (Rg over potential radiation) the diffuse
#: fraction of Erbs et al. (1982) (m) bounds at about 0.34 under any sky (its product with
#: the clearness index peaks there, near an index of 0.45), about half of a clear sky's
#: 0.65-0.8; an afternoon's cloud that builds on most days breaks on some, and its
#: brightest afternoon record reaches the clear sky's beam. Our choice: 0.7, the diffuse
#: bound's half with a margin for noise, for light scattered by cloud edges and for an
#: hourly record at a shade's edge that holds part of its hour in the beam (a tree line
#: blocking the sun below 25 deg at 34.5 deg S, `tests/test_preflight.py`, is lost at
#: 0.6 on hourly records).
_SHADE_BRIGHTEST_RATIO = 0.7
#: Months in which the same time from solar noon, of one half of the day, is shaded, for
#: the column to be named; our choice: an obstacle shades the same hours for months,
#: while the clear records of a cloudy month fall in one half by chance at scattered
#: times (on invented two-state skies with 3-5 % of the days clear, three months were
#: reached by chance in 4 of 300 years, four in none).
_SHADE_MIN_MONTHS = 4


def shaded_rg(rg, potential, stamps, columns=None) -> str | None:
    """A message where Rg is shaded for part of the day (morning or afternoon), or None.

    Parameters
    ----------
    rg : array_like
        Global radiation of each record [W m-2], NaN where missing.
    potential : array_like
        Potential (top-of-atmosphere) radiation of each record [W m-2], interval means.
    stamps : pandas.DatetimeIndex
        Interval starts, local standard time, evenly spaced.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where mornings and afternoons reach the same clear sky.

    Notes
    -----
    The sun's path is symmetric about solar noon: a record some time before noon and one
    as long after it see the sun at the same elevation through the same air mass, so their
    clear-sky clearness index (Rg / potential radiation) is the same (Iqbal 1983 (m);
    Campbell & Norman 1998, ch. 11 (m)). Each day's records are counted from the record of
    highest potential radiation; in each month and at each distance from it (potential
    radiation 200 W m-2 or more), the 90th percentile of the clearness of the morning's
    and of the afternoon's records stands for their clear sky (and the 75th must agree,
    so that the few clear records of a cloudy month do not decide). A tree, a mast or the tower
    shading the sensor for some hours dims that half's clear sky by half or more there;
    named where one time from noon falls to 0.6 or less of the other half's, at both
    percentiles, in at least four months, and the dim cell's brightest record too stays
    at 0.7 or less of the other half's clear sky: behind an obstacle the sensor sees
    the diffuse light alone on every day (a clearness of about 0.34 at most, Erbs et al.
    1982 (m)), while clouds that build on most afternoons (a cloud forest's, a tropical
    wet season's convection) break on some and let the beam through (round
    falsealarm61). The daytime light response then reads the shaded hours' uptake at
    too little light (on the invented grassland example, Rg a quarter from 15 to 18 h
    local: daytime GPP +44 g C m-2, silent before). A clock hours off makes the halves
    differ too; the clock check names that. A horizon (a mountain) shades the canopy as
    well as the sensor: the text says that such a shade is real.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed., Springer, ch. 11.

    Erbs, D. G., Klein, S. A., & Duffie, J. A. (1982). Estimation of the diffuse
    radiation fraction for hourly, daily and monthly-average global radiation. Solar
    Energy, 28(4), 293-302.

    Iqbal, M. (1983). An Introduction to Solar Radiation. Academic Press.
    """
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    index = pd.DatetimeIndex(stamps)
    if rg.shape != potential.shape or rg.size != len(index) or rg.size < 3:
        return None
    days = np.asarray(index.normalize().asi8)
    starts = np.flatnonzero(np.concatenate([[True], days[1:] != days[:-1]]))
    sizes = np.diff(np.concatenate([starts, [days.size]]))
    noon = np.maximum.reduceat(potential, starts)
    position = np.arange(rg.size) - np.repeat(starts, sizes)
    noon_position = np.repeat([int(np.argmax(potential[a:a + n])) for a, n in
                               zip(starts, sizes, strict=True)], sizes)
    offset = position - noon_position
    usable = (np.isfinite(rg) & (potential >= _SHADE_MIN_POTENTIAL) & (offset != 0)
              & (np.repeat(noon, sizes) > 0.0))
    if not usable.any():
        return None
    with np.errstate(divide="ignore", invalid="ignore"):
        clearness = rg / potential
    month = np.asarray(index.year * 12 + index.month - 1)
    cells = pd.DataFrame({"month": month[usable], "distance": np.abs(offset[usable]),
                          "afternoon": offset[usable] > 0, "clearness": clearness[usable]})
    grouped = cells.groupby(["month", "distance", "afternoon"])["clearness"]
    upper, lower = (grouped.quantile(share / 100.0) for share in _SHADE_PERCENTILES)
    table = pd.DataFrame({"count": grouped.size(), "clear": upper, "lower": lower,
                          "brightest": grouped.max()}).unstack()
    if not {False, True} <= set(table["count"].columns):
        # one half of the day only: the potential radiation peaks at the first or last
        # record of every day (stamps or utc_offset about 12 h off; the clock check names
        # it), so no morning is compared with an afternoon
        return None
    table = table.dropna()
    # (measure, afternoon) -> its values, each column taken once
    column = {key: table[key].to_numpy() for key in table.columns}
    kept = ((column[("count", False)] >= _SHADE_MIN_RECORDS)
            & (column[("count", True)] >= _SHADE_MIN_RECORDS))
    if not kept.any():
        return None
    strata = table.index[kept]
    shaded = {}
    for name, dim_half in (("morning", False), ("afternoon", True)):
        clear, lower, brightest = (column[(measure, dim_half)][kept]
                                   for measure in ("clear", "lower", "brightest"))
        other_clear, other_lower = (column[(measure, not dim_half)][kept]
                                    for measure in ("clear", "lower"))
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = clear / other_clear
            lower_ratio = lower / other_lower
            hit = ((other_clear > 0.0) & (other_lower > 0.0) & (ratio <= _SHADE_RATIO)
                   & (lower_ratio <= _SHADE_RATIO)
                   & (brightest / other_clear <= _SHADE_BRIGHTEST_RATIO))
        shaded[name] = pd.Series(ratio[hit], index=strata[hit])
    def recurring(hit):
        """Months shaded at the distance from noon shaded in the most months."""
        return int(hit.groupby(level=1).size().max()) if hit.size else 0

    name = max(shaded, key=lambda key: recurring(shaded[key]))
    hit = shaded[name]
    if recurring(hit) < _SHADE_MIN_MONTHS:
        return None
    months = hit.index.get_level_values(0).nunique()
    column = (columns or {}).get("rg", "rg")
    other = "afternoon" if name == "morning" else "morning"
    sign = -1 if name == "morning" else 1
    dim_cells = cells[(cells["afternoon"] == (name == "afternoon"))].set_index(
        ["month", "distance"]).index.isin(hit.index)
    clock = (index.hour + index.minute / 60.0)[usable][
        (offset[usable] * sign > 0)][dim_cells]
    hours = (f", mostly between {np.percentile(clock, 10):.1f} and "
             f"{np.percentile(clock, 90):.1f} h local standard time" if clock.size else "")
    return (f"rg (column {column!r}): on clear days the {name} reaches a median "
            f"{float(np.median(hit)):.2f} of the {other}'s clearness at the same height of "
            f"the sun (Rg over potential radiation, 90th percentile of each month and hour "
            f"from solar noon; {hit.size} such times of day in {months} months{hours}), where a "
            "clear sky is symmetric about solar noon: the sensor looks shaded for part of "
            "the day (a tree, a mast or the tower), so the daytime light response reads those "
            "hours' uptake at too little light; mount the sensor clear of obstacles or mark "
            "the shaded records missing in a copy of the file (a horizon that shades the "
            "canopy as well is real and can stay)")


#: Share of the records with the sun down whose Rg is missing beyond which, beside a
#: sensor present by day, the night is named as left blank [1]. Our choice: a sensor's or
#: logger's outages fall by day and night alike, so a night missing nine records in ten
#: while the day keeps at least half is a rule of the logger or the export, not an outage.
_DARK_BLANK_SHARE = 0.9
#: Share of the records with the sun up whose Rg must be present [1]. Our choice.
_SUNLIT_PRESENT_SHARE = 0.5
#: Records with the sun down needed to judge: ten nights of half-hours. Our choice.
_DARK_RECORDS = 240


def rg_blank_in_the_dark(rg, potential, columns=None) -> str | None:
    """A message where Rg is missing in the dark but present by day, or None.

    Parameters
    ----------
    rg : array_like
        Global radiation of each record [W m-2] (NaN = missing).
    potential : array_like
        Potential radiation of each record [W m-2]; 0 with the sun below the horizon.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where Rg is missing in fewer than nine in ten of the
        records with the sun down (:data:`_DARK_BLANK_SHARE`), or missing in half or more
        of those with the sun up, or fewer than :data:`_DARK_RECORDS` are dark.

    Notes
    -----
    With the sun below the horizon no short-wave radiation reaches a pyranometer, which
    reads 0 within its thermal offset of a few W m-2 (WMO 2018, Guide to Instruments and
    Methods of Observation, vol. I, ch. 7 (m)). Some loggers and exports write no value
    there (a value below a threshold, or a negative offset, left blank). The night's Rg
    is then a driver gap of every night: the gap filling cannot fill it from Rg's own
    records, the daytime method's sums come out NaN, the clock check cannot judge, and the
    night fills of NEE lose their radiation condition (on the example site, Rg below
    5 W m-2 left blank moved NEE by -5.6 and nighttime GPP by +9.6 g C m-2 and left
    daytime GPP NaN, named only as unfilled Rg records; round mistakes23).

    References
    ----------
    World Meteorological Organization (2018). Guide to Instruments and Methods of
    Observation, vol. I, ch. 7 (measurement of radiation) (m).
    """
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    if rg.size == 0 or rg.size != potential.size:
        return None
    dark, sunlit = potential <= 0.0, potential > 0.0
    if int(dark.sum()) < _DARK_RECORDS or not sunlit.any():
        return None
    dark_missing = float(np.mean(~np.isfinite(rg[dark])))
    sunlit_missing = float(np.mean(~np.isfinite(rg[sunlit])))
    if dark_missing < _DARK_BLANK_SHARE or sunlit_missing >= 1.0 - _SUNLIT_PRESENT_SHARE:
        return None
    column = (columns or {}).get("rg", "rg")
    return (f"rg (column {column!r}) is missing in {100 * dark_missing:.0f} % of the "
            f"{int(dark.sum())} "
            f"records with the sun down but in {100 * sunlit_missing:.0f} % of those with the sun "
            "up: a logger or export that writes no value in the dark (or below a threshold) reads "
            "like this; a pyranometer reads 0 there within a few W m-2, so write 0 for the "
            "night in a copy of the file (as it is, every night is a driver gap: the daytime "
            "method's sums come out NaN and the clock check cannot judge)")


# An air temperature without a diurnal course (our choice, physically argued): on clear
# days the ground absorbs sunlight by day and loses long-wave radiation by night, so the
# air near it warms and cools by several K (Oke 1987, ch. 2 and 7 (m); the diurnal range
# over land is near 10 K on average, Easterling et al. 1997 (m)). The mean course of the
# day over at least ten clear days (Rg a clearness of 0.6 of the potential or more)
# spanning under 1 K is no measured air temperature: a daily mean or a daily value
# interpolated to the records, or a deep soil probe, reads like this.
_FLAT_TAIR_CLEARNESS = 0.6
_FLAT_TAIR_MIN_DAYS = 10
_FLAT_TAIR_RANGE = 1.0             # K
_FLAT_TAIR_DAY_POTENTIAL = 50.0    # W m-2, the day's mean potential radiation


def flat_air_temperature(tair, rg, potential, stamps, interval_minutes: float,
                         columns=None) -> str | None:
    """A message where the air temperature shows no diurnal course on clear days, or None.

    Parameters
    ----------
    tair : array_like
        Air temperature of each record [°C] (NaN = missing).
    rg : array_like
        Global radiation of each record [W m-2] (NaN = missing).
    potential : array_like
        Potential radiation of each record [W m-2].
    stamps : array_like of datetime64
        Interval starts of the records (a regular grid).
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than :data:`_FLAT_TAIR_MIN_DAYS` clear days
        (:data:`_FLAT_TAIR_CLEARNESS`, nine in ten records of Rg and tair present, a mean
        potential radiation of :data:`_FLAT_TAIR_DAY_POTENTIAL` or more) are found, or
        where the mean course of their air temperature about each day's mean spans
        :data:`_FLAT_TAIR_RANGE` or more.

    Notes
    -----
    On clear days the surface's radiation balance turns from a gain by day to a loss by
    night and the air near the ground follows it by several K (Oke 1987 (m); the mean
    diurnal range over land is about 10 K, Easterling et al. 1997 (m)). Averaging over
    many clear days removes the weather's day-to-day changes and keeps that course. A
    column without it is a daily mean (or daily values interpolated to the records) or a
    deep soil probe mapped as the air temperature; on the example site a 24-h running
    mean as tair moved nighttime GPP by -244.8, Reco by -243.5 and daytime GPP by
    -198.4 g C m-2, named only as air and soil temperature swapped in July (round
    mistakes25).

    References
    ----------
    Oke, T. R. (1987). Boundary Layer Climates, 2nd ed. Methuen, London (m).
    Easterling, D. R. et al. (1997). Maximum and minimum temperature trends for the
    globe. Science 277, 364-367 (m).
    """
    tair = np.asarray(tair, dtype=float)
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    index = pd.DatetimeIndex(stamps)
    if tair.size == 0 or not tair.size == rg.size == potential.size == len(index):
        return None
    per_day = _records_per_day(interval_minutes)
    day = index.normalize()
    # each day's counts and means column by column, as a grouping on the days themselves
    # takes them (pandas picks its summation for a block of columns by NaN in any of
    # them), on the unlabelled columns 0, 1, 2 (tair, rg, potential): a fifth of the cost
    codes = pd.factorize(day, sort=True)[0]
    grouped = pd.DataFrame(np.column_stack([tair, rg, potential])).groupby(codes)
    tair_n, rg_n = (grouped[j].count().to_numpy() for j in (0, 1))
    tair_mean, rg_mean, potential_mean = (grouped[j].mean().to_numpy() for j in (0, 1, 2))
    clear = ((tair_n >= 0.9 * per_day) & (rg_n >= 0.9 * per_day)
             & (potential_mean >= _FLAT_TAIR_DAY_POTENTIAL)
             & (rg_mean >= _FLAT_TAIR_CLEARNESS * potential_mean))
    clear_days = int(clear.sum())
    if clear_days < _FLAT_TAIR_MIN_DAYS:
        return None
    in_clear = clear[codes]
    anomaly = tair[in_clear] - tair_mean[codes[in_clear]]
    slot = ((index - day) / pd.Timedelta(minutes=interval_minutes)).astype(int)
    course = pd.Series(anomaly).groupby(np.asarray(slot)[in_clear]).mean()
    span = float(course.max() - course.min())
    if not np.isfinite(span) or span >= _FLAT_TAIR_RANGE:
        return None
    column = (columns or {}).get("tair", "tair")
    return (f"tair (column {column!r}): over {clear_days} clear days its mean course of the "
            f"day spans only {span:.2f} K, where the air near the ground warms by day and "
            "cools by night by several K on clear days: a daily mean (or daily values "
            "spread over the records) or a deep soil probe reads like this, and the "
            "respiration fitted to it loses its temperature response; map the measured "
            "air temperature of each record")


#: Global radiation [W m-2] from which a record counts as sunlit for
#: :func:`sun_heated_tair`: strong sun, where an unshielded or unventilated sensor's
#: radiation error is largest (several K; WMO 2018, CIMO guide part I ch. 2 (m)).
_SUNLIT_RG = 500.0
#: Global radiation [W m-2] below which a record counts as dark (no radiation error).
_SUNLIT_DARK_RG = 5.0
#: Highest RH [%] of a record judged: below it, VPD / (1 - RH / 100) is not noise.
_SUNLIT_MAX_RH = 90.0
#: Records each of the sunlit and the dark set need before the two are compared.
_SUNLIT_MIN_RECORDS = 200
#: Sunlit and dark records each calendar month needs to be judged alone.
_SUNLIT_MONTH_RECORDS = 100
#: Smallest excess [K] of the tair column over the humidity probe's implied temperature in
#: sunlit records, beyond the same difference in dark records, that names the column.
#: Aspirated or well-shielded sensors agree within a few tenths of a K, naturally
#: ventilated shields under strong sun and light wind err by up to about 1-2 K (Lin et
#: al. 2001 (m); WMO 2018 (m)); 3 K leaves two sensors of different shields inside.
_SUNLIT_EXCESS = 3.0


def sun_heated_tair(tair, rh, vpd, rg, columns=None, stamps=None) -> str | None:
    """A message where the tair column reads warmer in sunlight than the humidity probe, or None.

    Parameters
    ----------
    tair : array_like
        The column mapped as air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa], as the file gives it.
    rg : array_like
        Global radiation [W m-2].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.
    stamps : array_like of datetime64, optional
        Interval starts of the records: where the whole record is not named, each
        calendar month with :data:`_SUNLIT_MONTH_RECORDS` sunlit and dark records is
        judged alone by the same rule (a fan that stopped for a month).

    Returns
    -------
    str or None
        The warning text; None where the median of tair less the implied temperature over
        sunlit records (Rg of :data:`_SUNLIT_RG` or more) exceeds the same median over
        dark records (Rg below :data:`_SUNLIT_DARK_RG`) by less than
        :data:`_SUNLIT_EXCESS`, or where fewer than :data:`_SUNLIT_MIN_RECORDS` records of
        either set (RH up to 90 %) can judge. A VPD derived from RH and the tair column
        itself always gives a difference of 0.

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) holds at one moment (Campbell & Norman 1998, ch. 3 (m)),
    so VPD and RH written by a humidity probe imply the air temperature T of each record
    (the Magnus form of :func:`~fluxpart.variables.saturation_vapour_pressure`, inverted,
    as in :func:`delayed_tair`). A thermometer heated by the sun, such as the logger's
    panel temperature, a sensor without its radiation shield or with a stopped fan, reads
    several K above the air in strong sun and light wind and right at night (WMO 2018,
    part I ch. 2 (m); Lin et al. 2001 (m)). Respiration fitted at night and extrapolated
    to those daytime temperatures overshoots: on the example site a tair column reading
    0.012 K per W m-2 of Rg too warm (about 10 K at noon in summer) moved nighttime GPP by
    +289, Reco by +290 and daytime GPP by +266 g C m-2 without a word (round mistakes26).
    The day-minus-night form keeps a constant offset between the two sensors (a
    calibration, a sonic temperature) out of the rule. A VPD computed from RH with a
    temperature cooler than the air by day, a soil's, gives the same sign (the example's
    VPD computed with its 5-cm soil temperature: +5.8 K, daytime Reco +18.5 g C m-2,
    round mistakes42), so the message names both causes; where the soil column is mapped
    and the VPD follows it, :func:`fluxpart.vpd_soil.vpd_from_soil_temperature` names
    that instead and this check is not run (round polish48). Where the whole record is not
    named, each calendar month with 100 sunlit and 100 dark records is judged alone: a
    fan stopped in July only moved the example's Reco by +69.3 g C m-2, diluted below
    the rule over the year.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 3 (m).
    Lin, X., Hubbard, K. G., Walter-Shea, E. A., Brandle, J. R., & Meyer, G. E. (2001).
    Some perspectives on recent in situ air temperature observations: modeling the
    microclimate inside the radiation shields. Journal of Atmospheric and Oceanic
    Technology 18, 1470-1484 (m).
    WMO (2018). Guide to Instruments and Methods of Observation (WMO-No. 8), Volume I,
    chapter 2: Measurement of temperature (m).
    """
    tair, rh, vpd, rg = (np.asarray(v, dtype=float) for v in (tair, rh, vpd, rg))
    if not tair.size == rh.size == vpd.size == rg.size:
        return None
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        usable = (np.isfinite(tair) & np.isfinite(rh) & np.isfinite(vpd) & np.isfinite(rg)
                  & (rh >= 1.0) & (rh <= _SUNLIT_MAX_RH) & (vpd > 0))
        saturation = np.where(usable, vpd / (1.0 - rh / 100.0), np.nan)
        implied = saturation_temperature(saturation)
        usable &= np.isfinite(implied) & (implied > -60) & (implied < 60)
        sunlit = usable & (rg >= _SUNLIT_RG)
        dark = usable & (rg < _SUNLIT_DARK_RG)
    difference = tair - implied
    names = columns or {}
    if int(sunlit.sum()) < _SUNLIT_MIN_RECORDS or int(dark.sum()) < _SUNLIT_MIN_RECORDS:
        return None
    day = float(np.median(difference[sunlit]))
    night = float(np.median(difference[dark]))
    excess = day - night
    if not excess >= _SUNLIT_EXCESS:
        return _sun_heated_months(difference, sunlit, dark, stamps, names)
    return (f"air temperature (column {names.get('tair', 'tair')!r}) reads a median "
            f"{excess:.1f} K warmer, against the temperature that VPD "
            f"({names.get('vpd', 'vpd')!r}) and RH ({names.get('rh', 'rh')!r}) imply, in "
            f"sunlit records (Rg {_SUNLIT_RG:.0f} W m-2 or more, {int(sunlit.sum())} "
            f"records: {day:+.1f} K) than in the dark ({int(dark.sum())} records: "
            f"{night:+.1f} K): a thermometer heated by the sun (the logger's panel "
            "temperature, a sensor without its radiation shield or with its fan stopped) "
            "reads like this, and respiration extrapolated to its daytime temperatures "
            "overshoots; so does a VPD computed from RH with a temperature cooler than "
            "the air by day (a soil's not mapped as tsoil: the data cannot tell the two "
            "apart); map the shielded air temperature as tair, or a VPD computed with it")


#: Variables judged by :func:`placeholder_value`: quantities that turbulence and the
#: sensor's own noise keep changing from record to record, with no value they rest at
#: (relative humidity rests at 100 % in fog, VPD at 0, Rg at the night's 0 or offset, a
#: soil at 0 °C while its water freezes or thaws; those are left out).
PLACEHOLDER_VARIABLES = ("tair", "ustar")
#: Smallest share of the present records one value must hold (1 %: a share of the gaps,
#: which are 30-40 % of a year's flux records (Falge et al. 2001 (m)) and fewer of the
#: drivers', written with one value).
_PLACEHOLDER_SHARE = 0.01
#: Smallest count of that value (a day of half-hours), as for NEE's codes.
_PLACEHOLDER_MIN_COUNT = 48
#: How many times as often as the mean of the two values one resolution step beside it.
_PLACEHOLDER_RATIO = 10.0
#: Separate runs the value must stand in: a stuck sensor holds one value in one run (named
#: by the stuck-sensor check), a filler writes it into gap after gap.
_PLACEHOLDER_MIN_RUNS = 5
#: Distinct values the column needs, so that its resolution is fine against its spread.
_PLACEHOLDER_MIN_LEVELS = 20
#: How the message names each variable's measurement.
_PLACEHOLDER_WHAT = {"tair": "a measured air temperature", "ustar": "a measured u*"}


def placeholder_value(values, name: str, stamps=None, columns=None) -> str | None:
    """A message where one value of a driver column stands in gap after gap, or None.

    Parameters
    ----------
    values : array_like
        The column's values in the frame's unit (°C for ``tair``, m s-1 for ``ustar``;
        NaN = missing).
    name : str
        Canonical name, one of :data:`PLACEHOLDER_VARIABLES`.
    stamps : array_like of datetime64, optional
        Interval starts of the records, to date the first run.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where no non-zero value holds 1 % or more of the present
        records (and 48 or more) at ten times or more the mean count of the two values one
        resolution step beside it, in five or more separate runs, with 1 % of the present
        records or more both below and above it (a bound the column was clipped at is not
        a filler) and no run holding half its count or more (a stuck sensor), or where the
        column has fewer than 20 distinct values.

    Notes
    -----
    The rule of the NEE missing-value codes (``unit_checks._nonzero_code_message``) for the
    drivers: a continuous quantity measured at a fixed resolution (the smallest difference
    between distinct values) gives any one value about as often as the values one step
    either side of it. Air temperature changes by tenths of a K within every half-hour in
    the surface layer's turbulence (Stull 1988 (m); Oke 1987 (m)), and a 30-min u* carries
    a sampling error of ten percent or more (Lenschow et al. 1994 (m)). A value far more
    frequent than its neighbours, in gap after gap, is a filler: a logger's default, or a
    preprocessing step that wrote the mean into the driver's gaps. On the example site the
    year's mean air temperature written into 15 % of the records moved nighttime GPP by
    -57, Reco by -54 and daytime GPP by -87 g C m-2, named only as the day and night
    methods preferring different temperatures (round mistakes26). Zero is left to
    :func:`zero_coded_temperature` (a temperature) and to the u* filter (a calm night).

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agric. For. Meteorol. 107, 43-69 (m).
    Lenschow, D. H., Mann, J., & Kristensen, L. (1994). How long is long enough when
    measuring fluxes and other turbulence statistics? J. Atmos. Oceanic Technol. 11,
    661-673 (m).
    Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer (m).
    """
    values = np.asarray(values, dtype=float)
    finite = np.isfinite(values)
    present = values[finite]
    nonzero = present[present != 0.0]
    if nonzero.size < _PLACEHOLDER_MIN_COUNT:
        return None
    levels, counts = np.unique(nonzero, return_counts=True)
    if levels.size < _PLACEHOLDER_MIN_LEVELS:
        return None
    most = int(np.argmax(counts))
    code, count = float(levels[most]), int(counts[most])
    if count < _PLACEHOLDER_MIN_COUNT or count < _PLACEHOLDER_SHARE * present.size:
        return None
    share = _PLACEHOLDER_SHARE * present.size
    if (np.count_nonzero(present < code) < share
            or np.count_nonzero(present > code) < share):
        return None     # a bound the values were clipped at, not a filler inside them
    step = float(np.min(np.diff(np.unique(present))))
    tolerance = step * 1e-6
    beside = int(np.count_nonzero(np.abs(np.abs(present - code) - step) <= tolerance))
    if count < _PLACEHOLDER_RATIO * max(beside / 2.0, 1.0):
        return None
    at_code = present == code          # runs among the present records: gaps do not cut one
    starts = at_code & ~np.concatenate([[False], at_code[:-1]])
    runs = int(np.count_nonzero(starts))
    if runs < _PLACEHOLDER_MIN_RUNS:
        return None
    run_of = np.cumsum(starts)[at_code]
    if np.bincount(run_of).max() >= 0.5 * count:
        return None     # mostly one run: a stuck sensor, named by the stuck-sensor check
    column = (columns or {}).get(name, name)
    first = ""
    if stamps is not None and len(stamps) == values.size:
        where = np.flatnonzero(finite)[int(np.argmax(starts))]
        first = f", the first from {pd.DatetimeIndex(stamps)[where]:%Y-%m-%d %H:%M}"
    return (f"{name} (column {column!r}): the value {code:g} occurs {count} times in {runs} "
            f"separate runs ({100 * (count / present.size):.1f} % of the present values{first}), "
            f"against {beside} at ±{step:.3g}, the column's resolution, beside it: "
            f"{_PLACEHOLDER_WHAT.get(name, 'a measured value')} does not repeat one value "
            "that often, so it "
            "looks like a filler written into the gaps (a logger's default, or the mean), "
            "and the fits would read it as measured; mark it missing in a copy of the file "
            "(or add it to [input] missing if no record measures it)")


def _sun_heated_months(difference, sunlit, dark, stamps, names) -> str | None:
    """The months whose own sunlit-minus-dark excess reaches :data:`_SUNLIT_EXCESS`, named
    in a warning (see :func:`sun_heated_tair`), or None."""
    if stamps is None or len(stamps) != difference.size:
        return None
    months = pd.DatetimeIndex(stamps).to_period("M")
    # each month's sunlit and dark records in time order by one sort each (_groups)
    sunlit_of = group_positions(months.asi8, sunlit)
    dark_of = group_positions(months.asi8, dark)
    nothing = np.zeros(0, dtype=np.intp)
    found = []
    for month in months.unique():
        day_set = sunlit_of.get(month.ordinal, nothing)
        dark_set = dark_of.get(month.ordinal, nothing)
        if day_set.size < _SUNLIT_MONTH_RECORDS or dark_set.size < _SUNLIT_MONTH_RECORDS:
            continue
        excess = float(np.median(difference[day_set]) - np.median(difference[dark_set]))
        if excess >= _SUNLIT_EXCESS:
            found.append(f"{month} ({excess:+.1f} K)")
    if not found:
        return None
    return (f"air temperature (column {names.get('tair', 'tair')!r}) reads warmer, against "
            f"the temperature that VPD ({names.get('vpd', 'vpd')!r}) and RH "
            f"({names.get('rh', 'rh')!r}) imply, in sunlit records (Rg {_SUNLIT_RG:.0f} W "
            f"m-2 or more) than in the dark by {_SUNLIT_EXCESS:.0f} K or more in "
            f"{len(found)} month(s): {', '.join(found)} (median excess), while the whole "
            "record does not: a thermometer heated by the sun for a time (a radiation "
            "shield lost or a fan stopped) reads like this, and respiration extrapolated to "
            "its daytime temperatures overshoots; so does a VPD computed in those months "
            "with a temperature cooler than the air by day (a soil's); check those months' "
            "air temperature and how their VPD was computed")
