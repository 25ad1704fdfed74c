"""Catch unit mix-ups and implausible columns in a record file before any stage runs.

Pure functions used by :mod:`fluxpart.io`. Each check looks at a whole variable
of the record (robust statistics: medians and percentiles, or physical limits),
so that a single bad hour never trips it, and returns a one-line message that
names the column, what was found and the setting that fixes it. The reader
raises :class:`~fluxpart.errors.ImplausibleValueError` with that message unless
the variable is listed in ``[input] accept_units`` (then it only warns).

Two kinds of check:

* **plausibility** (:func:`implausible_message`): most of a variable, or its
  median, lies outside the plausible range of :data:`fluxpart.variables.READER_VARIABLES`
  (kelvin read as °C, Pa read as hPa, a missing-value code not declared, ...);
* **mix-ups inside the plausible range** (:func:`mixup_messages`): values that
  pass the range but that a wrong unit explains and the right unit does not:
  NEE in mg CO2 m-2 s-1 read as µmol (factor 22.7), VPD in kPa read as hPa
  (factor 10), RH as a fraction, Rg in kW m-2 or MJ m-2 per interval.

A mix-up check only refuses where the record holds the conditions in which the
right unit could not look like that (enough days, warm and bright records); on
a record that cannot tell (a winter-only polar file, a week of fog) it warns.
"""

from __future__ import annotations

import math
import re
import warnings

import numpy as np

from . import nee_limits
from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS
from .errors import UnitError
from .nee_smoothing import (
    _MIN_PAIRS,
    SMOOTHED_CORRELATION,
    _pair_correlation,
    running_mean_length,
)
from .split_factor import stepped_months
from .variables import (
    LANGLEY_PER_MINUTE,
    PER_INTERVAL_UNITS,
    PPFD_PER_RG,
    READER_VARIABLES,
    REQUIRED,
    reads_as_canonical,
    saturation_vapour_pressure,
    to_canonical,
    units_for,
)

__all__ = [
    "IMPLAUSIBLE_SHARE",
    "MIN_DAYS_FOR_UNIT_CHECKS",
    "frame_code_messages",
    "frame_messages",
    "frame_refusal",
    "implausible_message",
    "mixup_messages",
    "apart_from_readings",
    "undeclared_code_cells",
]

#: A variable stops the reader when more than this share of its present values lies
#: outside the plausible range of :data:`fluxpart.variables.READER_VARIABLES` (and at least
#: 5 values do), or when its median does. Our choice: isolated outliers (spikes, a
#: bad hour) stay far below 5 % and are left to screening; a unit or mapping mistake
#: affects most of the record.
IMPLAUSIBLE_SHARE = 0.05

#: Days of present values a mix-up check needs before it refuses [days]; our choice:
#: a week holds several diurnal cycles, so a percentile describes the site, not a
#: spell of weather.
MIN_DAYS_FOR_UNIT_CHECKS = 7

_IMPLAUSIBLE_MIN_COUNT = 5
# Zero-code check of NEE (our choice): at least this many exact zeros, more than 1 % of
# the present values, and this many times the mean count of the two values one
# resolution step either side of 0 (a smooth distribution gives about 1); not judged
# where the resolution exceeds this share of the median |NEE| (too coarse to tell).
_ZERO_MIN_COUNT = 48
_ZERO_SPIKE_RATIO = 10.0
_ZERO_MAX_STEP_SHARE = 0.1
# A non-zero NEE value judged as an undeclared missing code by the same rule must also
# stand in at least this many separate runs of records (our choice: a stuck analyser
# repeats its last value in one run, which the preflight's stuck-sensor check names; a
# logger writes its code into every gap, and a year has dozens of NEE gaps).
_CODE_MIN_RUNS = 5
# NEE sign check (our choice): the release tail of warm, bright records must reach more
# than this many times as far as the uptake tail (95th vs 5th percentile; vegetated
# sites show 0.0-0.4, reversed files 2.8 and more on the generated sites of
# fluxpart.scenarios) ...
_SIGN_TAIL_RATIO = 2.0
# ... and beyond this release [µmol m-2 s-1] before the reader refuses: above what
# dormant or dry ecosystems release in warm daylight (a few µmol m-2 s-1, common
# practice); below it the check only warns.
_SIGN_MIN_RELEASE = 3.0
# Records in "warm and bright" conditions a mix-up check needs (our choice: half a
# day of half-hours, so that one odd afternoon cannot decide).
_MIN_ACTIVE_RECORDS = 24
#: Median change between consecutive night NEE records [µmol m-2 s-1 as read] at and above
#: which a record is in µmol m-2 s-1 whatever its size: the random error of half-hourly
#: CO2 fluxes, 0.3-1 µmol m-2 s-1 at small fluxes (Richardson et al. 2006 (m)), gives a
#: median night change of 0.2 or more, the same record in mg CO2 m-2 s-1 about 0.01
#: (22.7 times less); our choice: 0.1, the noise test's own limit, a factor of ten from each.
_NIGHT_NOISE_OF_UMOL = 0.1
#: Median Rg [W m-2] of the records without sun below which the column is not global
#: radiation: a pyranometer's night thermal offset is 0 to about -10 W m-2 (m), while net
#: radiation at night is -30 to -100 W m-2 under a clear sky and near 0 under cloud (m).
_NIGHT_RG_FLOOR = -20.0
#: Median [W m-2] of the records without sun below which a radiation column too dark by
#: day is named as possibly net radiation too: beyond a pyranometer's night thermal offset
#: (0 to about -10 W m-2 (m), as above), which a PAR sensor, a shaded or a soiled one keeps
#: (layouts34: net radiation of a cloudy site, -15 W m-2 at night, was named as PAR alone)
_NIGHT_NET_HINT = -10.0
#: Median air temperature [°C] of 30 days that no place on Earth reaches: the warmest
#: monthly means measured are 42.3 °C (Death Valley, July 2018, 108.1 °F (m)) and about
#: 42.5 °C (July 2024 (m)), which the former 42 °C refused as °F (review, round ten); 45 °C
#: leaves 2.5 K for a 30-day window hotter than a calendar month and a hotter year. Air
#: temperature in °F read as °C passes it whenever a month is warmer than 7.2 °C (45 °F).
_WARMEST_MONTH = 45.0
#: Largest excess [K] of the median soil temperature over the median air temperature of
#: the same records that a soil near the surface shows: the annual mean surface offset is
#: a few K and reaches about 10 K only under deep, lasting snow (m) (generated site-years
#: of fluxpart.scenarios: 0.3-2.9 K). In °F a soil at 0-15 °C reads 32-59 and passes the
#: range check 30 K or more above the air.
_SOIL_ABOVE_AIR = 15.0
#: ... and the median soil temperature [°C] read above which a soil so far above the air
#: is taken for °F: a snow-covered soil near 0 °C under a winter of -25 °C air is 25 K
#: above the air but never this warm; °F values of a soil at -4 °C or above exceed it.
_SOIL_FAHRENHEIT_MEDIAN = 25.0
#: Median soil temperature [°C] at or below which a soil far above the air does not tell
#: that an air temperature declared °F is in °C: under a lasting snow cover the soil near
#: the surface stays near 0 °C (the latent heat of its water holds it there) or below,
#: while the air above falls to -20 °C and less (m); our margin of 5 K covers soil a few
#: cm deeper, +1 to +3 °C under an early deep snow (m).
_SNOW_SOIL_MAX = 5.0
#: Hours after the first sunlit record of a day counted as its morning, when the CO2
#: stored below the sensor overnight is mixed out and drawn down [h]; our choice: the
#: morning transition of the boundary layer takes about 2-4 h after sunrise (common
#: practice).
_STORAGE_MORNING_HOURS = 4.0
#: Days with both a pre-dawn and a morning storage mean a storage sign check needs
#: [days]; our choice: two weeks hold calm and windy nights alike.
_STORAGE_MIN_DAYS = 14
#: Standard errors by which the days' mean pre-dawn storage must lie below their mean
#: morning storage for the storage column to be called reversed [1]; 3, the usual
#: bound of a one-sided test at about 0.1 % (the same bound as the storage-release
#: warning of :mod:`fluxpart.storage_check`).
_STORAGE_REVERSED_Z = 3.0
# Usual band of the 90th percentile of |value| over a record, in the canonical unit,
# used only to rank alternative units when several would make a column plausible
# (our choice, common practice).
_TYPICAL_P90 = {"nee": (1.0, 50.0), "rg": (100.0, 1200.0), "tair": (5.0, 45.0),
                "tsoil": (5.0, 45.0), "vpd": (2.0, 50.0), "ustar": (0.1, 2.0),
                "rh": (30.0, 100.0), "storage": (0.5, 20.0), "ppfd": (200.0, 2500.0)}


def most_repeated(values) -> tuple[float, int]:
    """The value that occurs most often in `values`, and how often (NaN, 0 if empty)."""
    codes, counts = np.unique(np.asarray(values, dtype=float), return_counts=True)
    if not counts.size:
        return np.nan, 0
    most = int(np.argmax(counts))
    return float(codes[most]), int(counts[most])


def undeclared_code(outside_values) -> tuple[float, int] | None:
    """The value that makes up half or more of a column's values beyond its plausible
    range, 3 times or more, and its count: an undeclared missing-data code; else None.

    Our rule: a logger's code repeats one number exactly, while a unit mix-up or a
    faulty sensor spreads over many values (used by the reader's hint,
    ``io._undeclared_code``, and by :func:`fluxpart.foreign_days.foreign_days`).
    """
    code, count = most_repeated(outside_values)
    if count < 3 or count < 0.5 * len(outside_values):
        return None
    return code, count


def undeclared_code_cells(name: str, file_values, canonical
                          ) -> tuple[np.ndarray, float, int] | None:
    """The cells of a column that hold an undeclared missing-data code, the code and its
    count; None where the column holds none.

    Parameters
    ----------
    name : str
        Canonical variable (a key of :data:`fluxpart.variables.READER_VARIABLES`).
    file_values : numpy.ndarray
        The column's values as written in the file (NaN = missing).
    canonical : numpy.ndarray
        The same values converted to the canonical unit.

    Returns
    -------
    tuple or None
        ``(cells, code, count)``: a boolean array of the cells holding the code, the code
        as written, how often it occurs. The code is the value beyond the variable's
        plausible range that makes up half or more of the values beyond it, 3 times or
        more (:func:`undeclared_code`, the reader's hint): a logger repeats its code
        exactly, a spike or a faulty sensor spreads over many values. Only values that
        stand apart from every other value of the column by more than
        :data:`_CODE_APART` of the plausible range count: a real extreme just beyond the
        range (a cold snap, a sensor's ceiling, a u* or VPD a little below 0) has
        neighbours near it and stays a reading (range-flagged, screened).

    References
    ----------
    Plausible ranges: :data:`fluxpart.variables.READER_VARIABLES` (their sources there).
    Missing-data codes such as -9999 and -6999 written into every gap are common practice
    of loggers and data centres.
    """
    variable = READER_VARIABLES.get(name)
    if variable is None or not (math.isfinite(variable.minimum)
                                or math.isfinite(variable.maximum)):
        return None
    file_values = np.asarray(file_values, dtype=float)
    canonical = np.asarray(canonical, dtype=float)
    with np.errstate(invalid="ignore"):
        outside = _outside(name, canonical)
    if outside.sum() < 3:        # no code (undeclared_code), the common case: no sort
        return None
    outside &= apart_from_readings(canonical, variable)
    found = undeclared_code(file_values[outside])
    if found is None:
        return None
    code, count = found
    return outside & (file_values == code), code, count


#: Share of a variable's plausible range [1] by which a value beyond it must stand apart
#: from every other value of its column to be taken for a missing-data code. Our choice,
#: physically argued: a reading beyond the range is reached through readings near its
#: bound (a half-hour's mean of air temperature, radiation or u* moves by a small part of
#: its range from one record to the next), so a real extreme (a cold snap at -60.1 °C
#: written to 0.1 K, Rg of 1503 W m-2 at a cloud's edge, a u* of -0.01 m s-1) has
#: neighbours within a few units; a code (-6999, -999.9, 9999, -99 in Rg) lies about a
#: hundred units or more from the nearest reading. A twentieth of the range (6 K of air
#: temperature, 77.5 W m-2 of Rg, 0.25 m s-1 of u*, 10 hPa of VPD) is far beyond the first
#: and short of the second (round review96: a cold snap's -60.1 °C written three times was
#: read as missing, "an undeclared code").
_CODE_APART = 0.05


def apart_from_readings(canonical, variable) -> np.ndarray:
    """Whether each value of `canonical` lies more than :data:`_CODE_APART` of the plausible
    range of `variable` from the nearest other value of the column (NaN: False): where
    a value beyond the range may be a missing-data code rather than a reading."""
    canonical = np.asarray(canonical, dtype=float)
    distinct = np.unique(canonical[np.isfinite(canonical)])
    if distinct.size == 0:
        return np.zeros(canonical.shape, dtype=bool)
    steps = np.diff(distinct)
    nearest = np.minimum(np.concatenate([[np.inf], steps]), np.concatenate([steps, [np.inf]]))
    apart = nearest > _CODE_APART * (variable.maximum - variable.minimum)
    where = np.clip(np.searchsorted(distinct, canonical), 0, distinct.size - 1)
    return np.isfinite(canonical) & apart[where]


def missing_code_hint(code: float, count: int, missing, place: str = "") -> str:
    """The hint that a repeated implausible value is an undeclared missing-data code.

    ``place`` names where the value is written where that is not the column named at
    the start of the message (e.g. ``" in the storage column"``).
    """
    return (f"; the value {code:g} alone occurs {count} times{place}: if it marks missing "
            f"data, add it to [input] missing (now {list(missing)})")


def _outside(name: str, values: np.ndarray) -> np.ndarray:
    variable = READER_VARIABLES[name]
    return (values < variable.minimum) | (values > variable.maximum)


def implausible_message(name: str, canonical: np.ndarray, file_values: np.ndarray, unit,
                        column: str, missing: tuple, interval_minutes: int = 30) -> str | None:
    """Message for a mostly implausible column, with its likely cause; None if plausible.

    Parameters
    ----------
    name : str
        Canonical variable (a key of :data:`fluxpart.variables.READER_VARIABLES`).
    canonical : numpy.ndarray
        Values converted to the canonical unit (NaN = missing).
    file_values : numpy.ndarray
        The same values as written in the file.
    unit : str or None
        Declared unit (None = canonical).
    column : str
        File column (for the message).
    missing : tuple
        Missing-value codes in force (for the message).
    interval_minutes : int, optional
        Record interval [minutes], to convert a unit per interval (Rg in MJ m-2, NEE in
        g C m-2).

    Notes
    -----
    A column is implausible when its median, or more than
    :data:`IMPLAUSIBLE_SHARE` of its present values (and at least 5), lie outside the
    plausible range, or when relative humidity read as percent never exceeds 1.05
    over at least 48 records (no surface air stays that dry: it is a fraction).
    """
    variable = READER_VARIABLES.get(name)
    if variable is None or not (math.isfinite(variable.minimum)
                                or math.isfinite(variable.maximum)):
        return None
    present = canonical[np.isfinite(canonical)]
    if present.size == 0:
        return None
    outside = _outside(name, present)
    median = float(np.median(present))
    share = outside.mean()
    median_outside = bool(_outside(name, np.array([median]))[0])
    fraction_rh = name == "rh" and reads_as_canonical("rh", unit) and _rh_fraction(present)
    mostly_outside = share > IMPLAUSIBLE_SHARE and outside.sum() >= _IMPLAUSIBLE_MIN_COUNT
    if fraction_rh:
        return (f"column {column!r} (rh, read as '%'): all {present.size} values are at most "
                f"{np.max(present):.3g} %, which no surface air stays below; it looks like a "
                "fraction: set [input.units] rh = \"fraction\"")
    if not (median_outside or mostly_outside):
        return None
    declared = unit if unit is not None else variable.unit
    message = (f"column {column!r} ({name}, read as {declared!r}): {int(outside.sum())} of "
               f"{present.size} present values ({100 * share:.1f} %) lie outside the plausible "
               f"range [{variable.minimum:g}, {variable.maximum:g}] {variable.unit}; median "
               f"{median:.4g} {variable.unit}")
    raw_present = file_values[np.isfinite(file_values)]
    outside_raw = raw_present[_outside(name, to_canonical(raw_present, name, unit,
                                                          interval_minutes=interval_minutes))]
    code, count = most_repeated(outside_raw)
    # a missing-data code explains the problem when all else is plausible without it
    rest = present[raw_present != code]
    if count >= 3 and (rest.size == 0 or _outside(name, rest).mean() <= IMPLAUSIBLE_SHARE):
        return message + missing_code_hint(code, count, missing)
    tenths = _tenths_hint(name, raw_present, unit)
    if tenths:
        return message + tenths
    better = _better_units(name, raw_present, unit, interval_minutes)
    if better:
        return message + (f"; the values look like {better[0]!r}: set [input.units] {name} = "
                          f"\"{better[0]}\"")
    return message + ("; check the column mapping and [input.units]; if these are "
                      "instrument faults, mark them with a missing code (or the site flag) "
                      f"in a copy of the file, or list {name} in [input] accept_units")


#: Units of whole numbers counting a fraction of the canonical unit (a logger's integer
#: storage, :data:`fluxpart.variables`): variable -> (divisor, unit) in the order tried;
#: named only for whole numbers (round layouts32)
SCALED_UNITS = {"tair": ((10, "0.1 °C"), (100, "0.01 °C")),
                "tsoil": ((10, "0.1 °C"), (100, "0.01 °C")),
                "rh": ((10, "0.1 %"),)}
_SCALED_SPELLINGS = frozenset({"0.1 °C", "0.1 degC", "0.01 °C", "0.01 degC", "0.1 %"})


def _whole_scaled(name: str, raw_present: np.ndarray, unit) -> str | None:
    """The unit of a fraction of a degree (or percent) under which a column read in the
    canonical unit and written as whole numbers is plausible, or None.

    Every value must be a whole number, none outside the plausible range once divided,
    and the divided values' 90th percentile of magnitude within the variable's typical
    range (:data:`_TYPICAL_P90`): tenths of a degree divided by 100 stay within the range
    but hover near 0 °C all year, which no site's temperature does.
    """
    if name not in SCALED_UNITS or not reads_as_canonical(name, unit):
        return None
    values = raw_present[np.isfinite(raw_present)]
    if values.size < _IMPLAUSIBLE_MIN_COUNT or not np.all(values == np.round(values)):
        return None
    low, high = _TYPICAL_P90[name]
    for divisor, scaled in SCALED_UNITS[name]:
        divided = values / divisor
        if (not _outside(name, divided).any()
                and low <= float(np.percentile(np.abs(divided), 90)) <= high):
            return scaled
    return None


def _tenths_hint(name: str, raw_present: np.ndarray, unit) -> str:
    """The refusal's fix for a temperature or RH written as whole numbers of a tenth or
    hundredth of its unit (a logger's integer storage), or ''."""
    scaled = _whole_scaled(name, raw_present, unit)
    if scaled is None:
        return ""
    return (f"; every value is a whole number and, read as {scaled!r}, all are plausible "
            f"(a logger storing integers, 153 for 15.3): set [input.units] {name} = "
            f"\"{scaled}\" (or list {name} in [input] accept_units)")


def _rh_fraction(rh: np.ndarray) -> bool:
    """True where at least 48 present RH values [%] never exceed 1.05: a fraction."""
    present = rh[np.isfinite(rh)]
    return present.size >= 48 and float(np.max(present)) <= 1.05


#: Least median [canonical unit] of a record read in another unit for that unit to be
#: named (review41). u*: a wind speed mapped as ustar (a year's median 1.5 to 5-6 m s-1
#: at towers over land, :mod:`fluxpart.preflight` (m)) was told to declare u* in cm s-1,
#: which reads it as a median u* of 0.015-0.06 m s-1, where towers' u* medians are
#: 0.2-0.7 m s-1 (m); our choice: 0.1 m s-1, about the geometric mean of 0.06 and 0.2.
_LEAST_MEDIAN = {"ustar": 0.1}

#: Greatest median [canonical unit] of a record read in another unit for that unit to be
#: named (release 0.40.0, after km h-1 became a unit of u*): a wind speed mapped as
#: ustar (median 4.6 m s-1) read in km h-1 is a median u* of 1.3 m s-1, above towers'
#: 0.2-0.7 m s-1 (m) and above the nights' bound of a tall canopy in
#: :data:`fluxpart.ustar_scale.NIGHT_BOUNDS` (1.0 m s-1); our choice: 1.0 m s-1. A u*
#: written in km h-1 (median 0.2-0.7 m s-1 once converted) is still named.
_MOST_MEDIAN = {"ustar": 1.0}


def _better_units(name: str, raw_present: np.ndarray, declared,
                  interval_minutes: int = 30) -> list:
    """Accepted units (other than `declared`) under which the values are plausible, best
    first; none under which the median falls below :data:`_LEAST_MEDIAN` or rises above
    :data:`_MOST_MEDIAN`."""
    probe = np.array([1.0, 2.0])
    declared_probe = to_canonical(probe, name, declared, interval_minutes=interval_minutes)
    candidates, seen = [], []
    for unit in units_for(name):
        if unit in _SCALED_SPELLINGS:
            continue                # named by _tenths_hint, from whole numbers only
        converted_probe = to_canonical(probe, name, unit, interval_minutes=interval_minutes)
        if np.allclose(converted_probe, declared_probe) or any(
                np.allclose(converted_probe, other) for other in seen):
            continue
        seen.append(converted_probe)
        values = to_canonical(raw_present, name, unit, interval_minutes=interval_minutes)
        if name in _LEAST_MEDIAN and np.median(values) < _LEAST_MEDIAN[name]:
            continue
        if name in _MOST_MEDIAN and np.median(values) > _MOST_MEDIAN[name]:
            continue
        if _outside(name, values).mean() <= 0.01 and not _outside(
                name, np.array([np.median(values)]))[0]:
            scale = max(float(np.percentile(np.abs(values), 90)), 1e-12)
            low, high = _TYPICAL_P90[name]
            distance = max(math.log10(low / scale), math.log10(scale / high), 0.0)
            candidates.append((distance, unit))
    return [unit for _, unit in sorted(candidates)]


def _enough_days(count: int, interval_minutes: int) -> bool:
    return count * interval_minutes >= MIN_DAYS_FOR_UNIT_CHECKS * 24 * 60


def _active(converted: dict, warm_celsius: float) -> np.ndarray | None:
    """Records that are warm and bright (Rg > 300 W m-2), or None if Rg or tair is absent."""
    rg, tair = converted.get("rg"), converted.get("tair")
    if rg is None or tair is None:
        return None
    with np.errstate(invalid="ignore"):
        return (rg > 300.0) & (tair > warm_celsius)


def _night_noise(nee: np.ndarray, converted: dict, potential) -> float:
    """Median |difference| of NEE between consecutive night records [µmol m-2 s-1], or NaN.

    The median is taken over the pairs starting at even and at odd records apart, and the
    larger one returned (round mistakes27): a column of hourly values written twice into
    half-hourly records (a forward fill) has every pair of one phase equal, so the median
    over all pairs fell to half the flux's random error and quiet months of such a file
    were refused as mg CO2 m-2 s-1 (the example's NEE so written: February and March),
    where :func:`fluxpart.column_faults.values_written_twice` names the true cause. A
    record of independent values gives the same median at both phases, so its noise, and
    the test of the 22.7-times-too-small unit, are unchanged.
    """
    if potential is not None:
        night = np.asarray(potential) <= 0.0
    elif converted.get("rg") is not None:
        with np.errstate(invalid="ignore"):
            night = converted["rg"] < 10.0
    else:
        return math.nan
    pairs = night[1:] & night[:-1] & np.isfinite(nee[1:]) & np.isfinite(nee[:-1])
    if pairs.sum() < 48:
        return math.nan
    differences = np.abs(np.diff(nee))
    phase = np.arange(pairs.size) % 2 == 0
    medians = [float(np.median(differences[pairs & side])) for side in (phase, ~phase)
               if (pairs & side).sum() >= 24]
    return max(medians) if medians else float(np.median(differences[pairs]))


def _smoothed_night(nee: np.ndarray, converted: dict, potential) -> bool:
    """True where the night changes of `nee` correlate as a running mean's do.

    A unit is a factor on every value: NEE in mg CO2 m-2 s-1 read as µmol m-2 s-1 keeps
    the independent random errors of separate records (Hollinger & Richardson 2005 (m)),
    so its consecutive night changes still correlate at about -1/2; a running mean of a
    few records (a spreadsheet's moving average, a five-record mean that skips blanks)
    shares its errors between neighbours and gives about 0
    (:func:`fluxpart.nee_smoothing.smoothed_nee`, the same bound and pairs). Such a
    column is quiet from one record to the next for its smoothing, not for its unit: the
    noise test must not call it mg CO2 (round mistakes29: the example's five-record mean
    was refused as mg CO2 in February, a refusal naming the wrong cause, where the
    preflight's smoothing warning names the right one). Where fewer than the smoothing
    check's 100 pairs exist, False (the noise test decides, as before).
    """
    night = _night_records(converted, potential)
    if night is None:
        return False
    found = _pair_correlation(np.asarray(nee, dtype=float), night, _MIN_PAIRS)
    return found is not None and found[0] >= SMOOTHED_CORRELATION


def _night_records(converted: dict, potential):
    """Night records of the smoothing tests: the potential radiation at or below 0 W m-2
    where given, else Rg below 10 W m-2 (as read); None where neither is known."""
    if potential is not None:
        return np.asarray(potential) <= 0.0
    if converted.get("rg") is not None:
        with np.errstate(invalid="ignore"):
            return converted["rg"] < 10.0
    return None


def _mean_length(nee: np.ndarray, converted: dict, potential):
    """(k, noise): the records a running mean of `nee` spans
    (:func:`fluxpart.nee_smoothing.running_mean_length` on the night records of
    :func:`_smoothed_night`) and the median night change of the records it averages, k
    times the mean's own over its changes other than exactly 0 (a mean that skips blanks
    repeats itself at the edges of a run) [µmol m-2 s-1 as read]; None where no length is
    found."""
    night = _night_records(converted, potential)
    if night is None:
        return None
    nee = np.asarray(nee, dtype=float)
    length = running_mean_length(nee, night)
    if length is None:
        return None
    change = np.abs(np.diff(nee))
    usable = night[1:] & night[:-1] & np.isfinite(change) & (change != 0.0)
    return length, length * float(np.median(change[usable]))


def _nee_message(converted: dict, units: dict, columns: dict, interval_minutes: int,
                 potential=None, smoothed: bool = False):
    """NEE in mg CO2 m-2 s-1 read as µmol m-2 s-1 (values 22.7 times too small).

    `smoothed` True: the whole record's night changes correlate as a running mean's
    (:func:`_smoothed_night`), so a part's quiet noise is not judged (a month holds too
    few night pairs to tell by itself).

    NEE in µmol m-2 s-1 declared in a unit the reader divides ("µg CO2 m-2 s-1", 44.0
    times smaller) is judged the same way once read, and named so (review70: read 44
    times too small before, as no unit check looked at a declared unit).
    """
    nee = converted.get("nee")
    declared = units.get("nee")
    divided = _divided_nee_unit(declared)
    if nee is None or not (reads_as_canonical("nee", declared) or divided):
        return None, None
    present = np.abs(nee[np.isfinite(nee)])
    if present.size < 48:
        return None, None
    if np.ptp(nee[np.isfinite(nee)]) == 0.0:
        # A constant series says nothing about its unit; the preflight names it as constant.
        return None, None
    p99 = float(np.percentile(present, 99))
    noise = _night_noise(nee, converted, potential)
    # The random error of half-hourly eddy-covariance CO2 fluxes is about 0.3-1 µmol m-2
    # s-1 even at small fluxes (Richardson et al. 2006, Agric. For. Meteorol. 136:1-18
    # (m)), so consecutive night records differ by a median of 0.2 µmol m-2 s-1 or more;
    # a record 22.7 times too small differs by about 0.02. Large-uptake sites in mg CO2
    # (|NEE| up to ~3 mg) are caught by this noise floor, quieter ones by p99 < 1 where
    # their night changes are not as large as a µmol record's: a polar desert, a desert
    # or a month under snow has |NEE| below 1 µmol m-2 s-1 in 99 % of its records by
    # nature, with the noise of any flux in µmol (round falsealarm51: an Antarctic moss
    # bank, p99 0.92 and a median night change of 0.21, was refused as mg CO2; 11 of 44
    # clean site-years had months named so, each with night changes of 0.20-0.25).
    quiet = noise < 0.1 and p99 < 4.0
    noisy = noise >= _NIGHT_NOISE_OF_UMOL      # NaN (no night pairs): not known
    if not quiet and (p99 >= 1.0 or noisy):
        return None, None
    mean_of = None
    if p99 >= 1.0 and (smoothed or _smoothed_night(nee, converted, potential)):
        # quiet only from one record to the next, as a running mean is (round mistakes29),
        # unless the records it averages are quiet too: a mean of k records changes by a
        # k-th of theirs (nee_smoothing.running_mean_length), so a mean of NEE in mg CO2
        # is still named (round review34: a three-record mean of a productive site's
        # mg CO2 record, p99 1.39, passed as µmol)
        mean_of = _mean_length(nee, converted, potential)
        if mean_of is None or mean_of[1] >= 0.1:
            return None, None
    found = (f"99 % of |values| are below {p99:.3g}" if p99 < 1.0 else
             f"consecutive night values differ by a median of only {noise:.2g}, below the "
             "random error of any flux record in µmol m-2 s-1" if mean_of is None else
             f"consecutive night values differ by a median of only {noise:.2g}, and as a "
             f"running mean of {mean_of[0]} records by {mean_of[1]:.2g} per record "
             "averaged, below the random error of any flux record in µmol m-2 s-1")
    per_record = 1e6 / CARBON_MOLAR_MASS / (interval_minutes * 60.0)
    # mmol m-2 s-1 is named where it can be: 99 % of values within the NEE range's bound
    # (100 µmol m-2 s-1) read as mmol (round layouts49)
    millimoles = (", or nee = \"mmol m-2 s-1\" if it is in mmol m-2 s-1 (1000 times "
                  "smaller)" if p99 <= READER_VARIABLES["nee"].maximum / 1000.0 else "")
    text = (f"column {columns['nee']!r} (nee, read as µmol m-2 s-1): {found}; the values look "
            "too small for µmol m-2 s-1: set [input.units] nee = \"mg CO2 m-2 s-1\" if the "
            "file is in mg CO2 m-2 s-1 (22.7 times smaller), or nee = \"g C m-2\" if it holds "
            f"g C m-2 per {interval_minutes}-minute record ({per_record:.3g} times smaller)"
            f"{millimoles} (or list nee in [input] accept_units to keep the values as they are)")
    if divided:
        text = (f"column {columns['nee']!r} (nee, read as {declared!r}, {divided:.3g} times "
                f"smaller than µmol m-2 s-1): {found} once read so; the values look like "
                "µmol m-2 s-1 as written: set [input.units] nee = \"µmol m-2 s-1\" if the "
                "file is in µmol m-2 s-1 (or list nee in [input] accept_units to keep the "
                "values as they are)")
    active = _active(converted, 5.0)
    nee_active = None if active is None else nee[active & np.isfinite(nee)]
    # Under warm, bright conditions an ecosystem's exchange together with the random
    # error of half-hourly eddy covariance (about 0.5-1 µmol m-2 s-1 even over deserts
    # and bare soil; Richardson et al. 2006, Agric. For. Meteorol. 136:1-18 (m))
    # exceeds 1 µmol m-2 s-1 in far more than 1 % of records.
    if (nee_active is not None and nee_active.size >= _MIN_ACTIVE_RECORDS
            and _enough_days(present.size, interval_minutes)):
        return text, None
    if divided:
        return None, (f"nee: read as {declared!r}, but {found} once read so; a half-hourly "
                      "flux record is rarely that small: if the file is in µmol m-2 s-1, "
                      "set [input.units] nee = \"µmol m-2 s-1\"")
    return None, (f"nee: read as µmol m-2 s-1, but {found}; a half-hourly flux record is "
                  "rarely that small: if the file is in mg CO2 m-2 s-1, set [input.units] nee "
                  "= \"mg CO2 m-2 s-1\"")


def _divided_nee_unit(declared) -> float | None:
    """The factor by which a declared NEE unit's values are divided when read ("µg CO2
    m-2 s-1": 44.0), or None for a unit read as written or multiplied."""
    if declared is None or (("nee", declared) in PER_INTERVAL_UNITS):
        return None
    try:
        scale = float(to_canonical(np.array([1.0]), "nee", declared)[0])
    except UnitError:                           # an unknown unit is refused elsewhere
        return None
    return 1.0 / scale if 0.0 < scale < 1.0 else None


def _zero_code_message(converted: dict, columns: dict, interval_minutes: int, missing=()):
    """Exact zeros in NEE that a missing-value code explains and a flux does not.

    A measured flux is a continuous quantity: at the file's resolution (the smallest
    non-zero magnitude in the column) exactly 0 is about as likely as the values one
    step either side of it. Zeros :data:`_ZERO_SPIKE_RATIO` times more frequent were
    written by a logger for "no value".
    Returns (refusal, warning).
    """
    nee = converted.get("nee")
    if nee is None or any(not isinstance(c, str) and c == 0 for c in missing):
        return None, None
    present = nee[np.isfinite(nee)]
    zeros = int(np.count_nonzero(present == 0.0))
    if zeros < _ZERO_MIN_COUNT or zeros <= 0.01 * present.size:
        return None, None
    magnitude = np.abs(present[present != 0.0])
    if magnitude.size == 0:
        return None, None     # a constant series: the preflight names it
    step = float(magnitude.min())
    if step > _ZERO_MAX_STEP_SHARE * float(np.median(magnitude)):
        return None, None     # rounded too coarsely for the spread: cannot tell
    beside = int(np.count_nonzero(magnitude <= step * (1 + 1e-9)))
    expected = beside / 2.0
    if zeros <= _ZERO_SPIKE_RATIO * max(expected, 1.0):
        return None, None
    found = (f"{zeros} of {present.size} present values ({100 * (zeros / present.size):.1f} %) are "
             f"exactly 0, against {beside} at ±{step:.3g}, the file's resolution, beside it; "
             "a flux is not exactly 0 that often")
    if _enough_days(present.size, interval_minutes):
        # the code of one column is given for that column first (review37): in [input]
        # missing 0 blanks every column, and where 0 is a reading at a column's bound (VPD
        # at saturation, 0-10 % of generated records) nothing names it
        return (f"column {columns['nee']!r} (nee): {found}: 0 looks like the logger's code "
                "for a missing value: add nee = [0] to [input.missing_by_variable] (0 is "
                "then no value in NEE only), or add 0 to [input] missing where 0 means no "
                "value in every column (there it also blanks readings of 0: Rg at night, "
                "VPD at saturation) (or list nee in [input] accept_units to keep the zeros "
                "as measured)"), None
    return None, (f"nee: {found}; if 0 marks missing values, add nee = [0] to "
                  "[input.missing_by_variable]")


def _nonzero_code_message(converted: dict, units: dict, columns: dict,
                          interval_minutes: int, missing=()):
    """A non-zero NEE value written so often that only a missing-value code explains it.

    The zero-code rule of :func:`_zero_code_message` applied to the most frequent non-zero
    value inside NEE's plausible range (one outside it is named by the range check): a flux
    is continuous, so at the file's resolution (the smallest difference
    between distinct values) one value is about as frequent as the values one step either
    side of it. A logger's code inside NEE's plausible range (``-99.99``, ``-99.9``, ``-99``,
    ``-9.99``) passes the range check and enters the fits as a measured uptake; in a year
    of gaps it stands in many separate runs (:data:`_CODE_MIN_RUNS`), where a stuck
    analyser repeats its value in one. Returns (refusal, warning).

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agric. For. Meteorol. 107, 43-69 (m): NEE records have gaps over
    30-40 % of a year, so a code written into them is a large share of the record.
    """
    nee = converted.get("nee")
    if nee is None:
        return None, None
    finite = np.isfinite(nee)
    present = nee[finite]
    nonzero = present[present != 0.0]
    if nonzero.size == 0:
        return None, None
    code, count = most_repeated(nonzero)
    limits = READER_VARIABLES["nee"]
    if not limits.minimum <= code <= limits.maximum:
        return None, None     # outside the range: the range check names the code
    if count < _ZERO_MIN_COUNT or count <= 0.01 * present.size:
        return None, None
    levels = np.unique(present)
    step = float(np.min(np.diff(levels))) if levels.size > 1 else np.inf
    if not np.isfinite(step) or step > _ZERO_MAX_STEP_SHARE * float(np.median(np.abs(nonzero))):
        return None, None     # rounded too coarsely for the spread: cannot tell
    tolerance = step * 1e-6
    beside = int(np.count_nonzero(np.abs(np.abs(present - code) - step) <= tolerance))
    if count <= _ZERO_SPIKE_RATIO * max(beside / 2.0, 1.0):
        return None, None
    at_code = np.zeros(nee.size + 1, dtype=bool)
    at_code[:-1] = finite & (nee == code)
    runs = int(np.count_nonzero(at_code[:-1] & ~np.concatenate([[False], at_code[:-2]])))
    if runs < _CODE_MIN_RUNS:
        return None, None
    shown = (f"{code:g}" if "nee" not in units
             else f"read as {code:g} µmol m-2 s-1 (the file's value under its unit)")
    found = (f"the value {shown} occurs {count} times in {runs} separate runs of records "
             f"({100 * (count / present.size):.1f} % of the present values), against {beside} at "
             f"±{step:.3g}, the file's resolution, beside it; a flux does not repeat one "
             "value that often")
    side = "below" if code <= float(np.min(present)) else "above"
    if nee_limits.written_as_limit(present, code):
        # an end of the values that they run on up to: a clip (round mistakes34), one
        # message here; the preflight's cut rule leaves this side to it
        repeated = found.replace("; a flux does not repeat one value that often", "")
        clip = (f"column {columns['nee']!r} (nee): {repeated}, and no value lies {side} it "
                f"while the values run on up to it: {nee_limits.WRITTEN_WORDS} (a "
                "plausibility window of a logger or processing program), so these records "
                "hold the limit, not the flux")
        advice = ("; restore the values as measured; to run on, add it to [input] missing "
                  f"(now {list(missing)}; its records are then gap-filled from the smaller "
                  "fluxes kept, which moves the budget), or list nee in [input] "
                  "accept_units to keep the values as written")
        if _enough_days(present.size, interval_minutes):
            return clip + advice, None
        return None, "nee: " + clip.split(": ", 1)[1] + advice
    if _enough_days(present.size, interval_minutes):
        return (f"column {columns['nee']!r} (nee): {found}: it looks like the logger's code "
                f"for a missing value: add it to [input] missing (now {list(missing)}), or "
                "list nee in [input] accept_units to keep the values as measured"), None
    return None, f"nee: {found}; if it marks missing values, add it to [input] missing"


def _reversed_sign(nee: np.ndarray, night: np.ndarray, active: np.ndarray):
    """(night median, 5th, 95th percentile of warm, bright NEE) where both are backwards.

    None where the records are too few to tell (48 night, :data:`_MIN_ACTIVE_RECORDS`
    warm and bright) or the sign looks right.
    """
    finite = np.isfinite(nee)
    night_values, active_values = nee[night & finite], nee[active & finite]
    if night_values.size < 48 or active_values.size < _MIN_ACTIVE_RECORDS:
        return None
    night_median = float(np.median(night_values))
    low, high = (float(v) for v in np.percentile(active_values, [5, 95]))
    reversed_tails = high > 0.0 and (low >= 0.0 or high > _SIGN_TAIL_RATIO * -low)
    if not (night_median < 0.0 and reversed_tails):
        return None
    return night_median, low, high


def _night_mask(converted: dict, potential):
    """Records without sun (potential radiation 0, else Rg below 10 W m-2); None if unknown."""
    if potential is not None:
        return np.asarray(potential) <= 0.0
    if converted.get("rg") is not None:
        return converted["rg"] < 10.0
    return None


def _night_median(converted: dict, potential) -> float:
    """Median NEE of the records without sun [µmol m-2 s-1]; NaN where it cannot be told."""
    nee, night = converted.get("nee"), _night_mask(converted, potential)
    if nee is None or night is None:
        return math.nan
    values = nee[night & np.isfinite(nee)]
    return float(np.median(values)) if values.size else math.nan


def _night_median_outside(converted: dict, potential, stamps, months: list) -> float:
    """:func:`_night_median` of the records outside the calendar `months` ("YYYY-MM")."""
    if stamps is None:
        return math.nan
    rest = ~np.isin(np.asarray(stamps, dtype="datetime64[M]").astype(str), months)
    part = {name: values[rest] for name, values in converted.items()}
    return _night_median(part, None if potential is None else np.asarray(potential)[rest])


def _nee_sign_message(converted: dict, columns: dict, interval_minutes: int, potential=None):
    """NEE with the opposite sign (uptake positive, e.g. NEP mapped as ``nee``).

    Two facts of the trade decide it together: at night there is no photosynthesis,
    so NEE is ecosystem respiration, a release (> 0); and by day under strong light
    photosynthesis draws NEE down, so among warm, bright records the uptake tail
    (negative NEE) reaches further from zero than the release tail. A record whose
    night median is negative *and* whose warm, bright records reach more than
    :data:`_SIGN_TAIL_RATIO` times further into release than into uptake (95th vs
    5th percentile), by more than :data:`_SIGN_MIN_RELEASE`, has both backwards.
    Either alone happens on real towers (cold open-path nights or a desert can show
    small negative night medians; a dormant season shows daytime release), so one
    alone never refuses. Returns (refusal, warning); both None when it cannot tell or
    finds nothing (:func:`mixup_messages` then applies the rule month by month).
    """
    nee, night = converted.get("nee"), _night_mask(converted, potential)
    if nee is None or night is None:
        return None, None
    active = _active(converted, 5.0)
    if active is None:
        return None, None
    finite = np.isfinite(nee)
    found = _reversed_sign(nee, night, active)
    if found is None:
        return None, None
    night_median, low, high = found
    found = (f"night values have a median of {night_median:.3g} µmol m-2 s-1 (respiration, "
             "a release, is positive) and warm, bright records have 95th and 5th percentiles "
             f"of {high:.3g} and {low:.3g}, a release tail longer than the uptake tail, the "
             "reverse of photosynthesis")
    if high > _SIGN_MIN_RELEASE and _enough_days(int(finite.sum()), interval_minutes):
        return (f"column {columns['nee']!r} (nee): {found}: the column looks like NEE with the "
                "opposite sign (uptake positive, as NEP): map a column with NEE positive = "
                "release to the atmosphere, or negate the values in a copy of the file (or "
                "list nee in [input] accept_units to keep them as they are)"), None
    return None, (f"nee: {found}; if the column has uptake positive (NEP), it needs the "
                  "opposite sign")


def _shifted_not_reversed(converted: dict, columns: dict, interval_minutes: int,
                          potential) -> str | None:
    """The refusal of an NEE column hours off its light, where it reads as NEP, or None.

    Half a day off its light, a correct NEE column has its daytime uptake at night and
    its night release by day, so :func:`_nee_sign_message` reads it as NEP. Where
    :func:`.record_shifts.nee_hour_shift` finds the column's changes following Rg's
    clearly best hours away (a passing cloud's changes: a column of the opposite sign
    follows the light in the same record), the refusal names the shift instead, so
    that the file is not negated (round mistakes23: 12 h late on the example site was
    refused as NEP).
    """
    from .record_shifts import nee_hour_shift

    nee, rg = converted.get("nee"), converted.get("rg")
    if nee is None or rg is None or potential is None:
        return None
    text = nee_hour_shift(nee, rg, potential, interval_minutes,
                          {"nee": columns.get("nee", "nee"), "rg": columns.get("rg", "rg")})
    if text is None:
        return None
    return (f"column {columns.get('nee', 'nee')!r} (nee): its night values look like uptake "
            f"and its day values like release, but not as NEP would: {text} (or list nee in "
            "[input] accept_units to keep the values as they are)")

def _storage_sign_message(converted: dict, columns: dict, potential, stamps) -> str | None:
    """A storage flux with the opposite sign (depletion positive), or None.

    The storage flux is the rate of change of the CO2 held below the flux sensor,
    positive where it grows. At night respiration is the only source and weak mixing
    keeps its CO2 below the sensor, so the store grows until dawn (storage > 0); after
    sunrise mixing and photosynthesis draw it down (storage < 0) (common practice: the
    storage term's nocturnal build-up and morning flush). For each day the mean
    storage from midnight to the first sunlit record (pre-dawn) is compared with the
    mean over the next :data:`_STORAGE_MORNING_HOURS`. The column is reversed where,
    over at least :data:`_STORAGE_MIN_DAYS` days, the median morning mean is positive
    (a store that grows through the morning, when the right sign shows the flush) and
    the days' pre-dawn minus morning means average :data:`_STORAGE_REVERSED_Z`
    standard errors (over days) or more below zero. The pre-dawn sign alone does not decide: on windy nights the store
    stops growing and its storage flux is near zero. Added with the wrong sign the
    storage term subtracts the night's accumulation from NEE and the morning flush
    adds to it, which the u* filter and the gap filling do not cancel.
    """
    storage = converted.get("storage")
    if storage is None or potential is None or stamps is None:
        return None
    storage = np.asarray(storage, dtype=float)
    sunlit = np.asarray(potential) > 0.0
    days = np.asarray(stamps, dtype="datetime64[D]")
    minutes = (np.asarray(stamps, dtype="datetime64[m]") - days).astype(float)
    day_numbers = (days - days[0]).astype(int)
    n_days = int(day_numbers[-1]) + 1
    # minute of the day's first sunlit record (inf on a day without one)
    sunrise = np.full(n_days, np.inf)
    np.minimum.at(sunrise, day_numbers[sunlit], minutes[sunlit])
    since = minutes - sunrise[day_numbers]
    predawn = since < 0.0
    morning = (since >= 0.0) & (since < _STORAGE_MORNING_HOURS * 60.0)
    finite = np.isfinite(storage)

    def daily_mean(rows):
        total = np.bincount(day_numbers[rows & finite], storage[rows & finite], n_days)
        count = np.bincount(day_numbers[rows & finite], minlength=n_days)
        expected = np.bincount(day_numbers[rows], minlength=n_days)
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where((count >= 2) & (count * 2 >= expected), total / count, np.nan)

    night_mean, morning_mean = daily_mean(predawn), daily_mean(morning)
    both = np.isfinite(night_mean) & np.isfinite(morning_mean)
    if both.sum() < _STORAGE_MIN_DAYS:
        return None
    night_median = float(np.median(night_mean[both]))
    morning_median = float(np.median(morning_mean[both]))
    contrast = night_mean[both] - morning_mean[both]
    error = float(np.std(contrast, ddof=1)) / math.sqrt(contrast.size)
    z = float(np.mean(contrast)) / error if error > 0 else 0.0
    if morning_median <= 0.0 or z > -_STORAGE_REVERSED_Z:
        return None
    return (f"column {columns['storage']!r} (storage): over {int(both.sum())} days its median "
            f"is {night_median:.3g} µmol m-2 s-1 before dawn and {morning_median:+.3g} in the "
            f"{_STORAGE_MORNING_HOURS:g} h after sunrise, lower before dawn by {-z:.1f} "
            "standard errors: CO2 accumulates below the sensor at night "
            "(storage > 0) and is flushed in the morning (< 0), so the column looks like "
            "storage with the opposite sign: negate it in a copy of the file (or list "
            "storage in [input] accept_units to keep it as it is)")


def _without_rh_fraction_months(converted: dict, units: dict, potential, stamps,
                                month_rows: list | None = None) -> dict:
    """`converted` with rh missing in the calendar months whose RH alone is a fraction
    (:func:`_rh_fraction`) where the whole record's is not; unchanged otherwise.
    `month_rows` as from :func:`_month_rows` of `stamps` (computed here if not given)."""
    rh = converted.get("rh")
    if (rh is None or not reads_as_canonical("rh", units.get("rh")) or _rh_fraction(rh)
            or stamps is None):
        return converted
    months = _months_refused(lambda part, sun: _rh_fraction(part["rh"]), converted,
                             potential, _month_rows(stamps) if month_rows is None else month_rows)
    if not months:
        return converted
    fraction = np.isin(np.asarray(stamps, dtype="datetime64[M]").astype(str), months)
    return {**converted, "rh": np.where(fraction, np.nan, rh)}


def _month_rows(stamps) -> list:
    """Each calendar month's label ("YYYY-MM") and rows (in record order), in month order;
    [] without stamps. Computed once per record for :func:`_months_refused`'s checks."""
    if stamps is None:
        return []
    months = np.asarray(stamps, dtype="datetime64[M]")
    # each month's rows in record order, from one stable sort (a mask per month would
    # scan the whole record once per month: quadratic in the record's years)
    order = np.argsort(months, kind="stable")
    unique, starts = np.unique(months[order], return_index=True)
    return [(str(month), rows)
            for month, rows in zip(unique, np.split(order, starts[1:]), strict=True)]


def _months_refused(check, converted: dict, potential, month_rows: list) -> list:
    """Calendar months ("YYYY-MM") whose records alone `check` refuses.

    `check(converted, potential)` is a whole-record mix-up check returning a refusal
    (text) or None; it sees each month's slice of `converted` and `potential`, the months
    and their rows from :func:`_month_rows`.
    """
    potential = None if potential is None else np.asarray(potential)
    found = []
    for month, rows in month_rows:
        part = {name: values[rows] for name, values in converted.items()}
        if check(part, None if potential is None else potential[rows]):
            found.append(month)
    return found


def _changed_within(check, name: str, columns: dict, what: str, converted: dict, potential,
                    month_rows: list) -> list:
    """The warning for a mix-up `check` finds in some calendar months only ([] if none).

    `check` and `month_rows` as for :func:`_months_refused`; `columns` maps variables to
    file columns; `what` says what those months look like.
    """
    return _changed_months_warning(name, columns, what,
                                   _months_refused(check, converted, potential, month_rows))


def _changed_months_warning(name: str, columns: dict, what: str, months: list) -> list:
    """The warning of :func:`_changed_within` for `months` ([] if none)."""
    if not months:
        return []
    column = columns.get(name, name)
    return [f"column {column!r} ({name}): in {len(months)} month(s) ({', '.join(months)}) "
            f"the values alone look like {what}, while the whole record does not: the unit, "
            "sign or sensor may have changed within the record; check those months and "
            "correct them in a copy of the file"]


#: Median of a column's values at and above which values all within 0-100 read as a
#: relative humidity in % rather than a VPD [file unit]. Our choice: air over land holds
#: a median relative humidity of 50-90 % (m), while a VPD median of 30 hPa or more is a
#: desert's, whose values exceed 100 hPa (saturation at 45 degC, 96 hPa).
_RH_LIKE_MEDIAN = 30.0


def _relative_humidity_like(values, tair) -> bool:
    """Whether a column's values (in the file's unit) all lie within 0-100 with a median
    of :data:`_RH_LIKE_MEDIAN` or more and fall as the air warms, as a relative humidity in
    % does.

    At a vapour pressure e that changes little within hours, RH = e / e_s(T) falls as the
    air warms and the deficit e_s(T) - e rises (Monteith & Unsworth 2013, ch. 2 (m)): a
    hot desert's VPD in hPa (median 30-50 hPa, all below 100) read as kPa moves with the
    temperature and is no humidity (review55: it was named as one, not offered hPa). The
    changes from record to record are compared, so that a season both warm and humid (a
    monsoon) does not turn the sign.

    Parameters
    ----------
    values : numpy.ndarray
        The column's values in the file's unit, consecutive records, NaN where missing.
    tair : numpy.ndarray
        Air temperature of the same records [degC].
    """
    present = values[np.isfinite(values)]
    if not (present.size and present.min() >= 0.0 and present.max() <= 100.0
            and np.median(present) >= _RH_LIKE_MEDIAN):
        return False
    change, warming = np.diff(values), np.diff(tair)
    both = np.isfinite(change) & np.isfinite(warming)
    if both.sum() < 3 or np.std(change[both]) == 0.0 or np.std(warming[both]) == 0.0:
        return False
    return bool(np.corrcoef(change[both], warming[both])[0, 1] < 0.0)


def _vpd_messages(converted: dict, units: dict, columns: dict, interval_minutes: int):
    """VPD off by a factor 10 (kPa read as hPa, or hPa read as kPa)."""
    vpd, tair = converted.get("vpd"), converted.get("tair")
    declared = units.get("vpd")
    if vpd is None or tair is None:
        return None, None
    # judged at plausible air temperatures only: a tair in the wrong unit (°C read as K:
    # -265 °C, whose Magnus value is astronomically large) gives no basis, and its own
    # message names it (lead53: VPD in kPa was then told to be in inHg)
    both = np.isfinite(vpd) & np.isfinite(tair) & ~_outside("tair", tair)
    if both.sum() < 48:
        return None, None
    saturation = saturation_vapour_pressure(tair[both])
    ratio = vpd[both] / saturation
    shown = declared or "hPa"
    # physical limit: VPD cannot exceed the saturation vapour pressure at tair
    # (allowance 10 % + 1 hPa for sensor error and the lag between the sensors)
    above = vpd[both] > 1.1 * saturation + 1.0
    if above.mean() > IMPLAUSIBLE_SHARE:
        declared_scale = to_canonical(np.array([1.0]), "vpd", declared)[0]
        # a smaller unit fits where its values stay below the saturation vapour pressure
        # and do not then stay below 0.1 of it throughout (relative humidity never below
        # 90 %, the bound of the too-small test below): values a few times the limit (the
        # VPD and tair columns exchanged) are no Pa read as hPa, 100 times it
        fits = [unit for unit in units_for("vpd")
                if to_canonical(np.array([1.0]), "vpd", unit)[0] < declared_scale
                and np.mean(vpd[both] * to_canonical(np.array([1.0]), "vpd", unit)[0]
                            / declared_scale > 1.1 * saturation + 1.0) <= IMPLAUSIBLE_SHARE
                and np.percentile(ratio * to_canonical(np.array([1.0]), "vpd", unit)[0]
                                  / declared_scale, 99) >= 0.1]
        fix = (f"the values look like {fits[0]!r}: set [input.units] vpd = \"{fits[0]}\""
               if fits else "check the column mapping and [input.units] vpd")
        raw = vpd / declared_scale
        if _relative_humidity_like(raw, tair):
            # a relative humidity mapped as vpd (round mistakes44): a smaller unit would
            # read a deficit of 1 hPa or less throughout, a saturated air the too-small
            # test refuses in turn, so no unit is offered
            fix = (f"the values look like a relative humidity in % (all within 0-100, "
                   f"median {np.nanmedian(raw):.3g}): map that column as rh in "
                   "[input.columns] (vpd is then derived from rh and tair) and vpd to the "
                   "deficit, if the file holds one")
        return (f"column {columns['vpd']!r} (vpd, read as {shown!r}): {100 * above.mean():.0f} % "
                "of records exceed the saturation vapour pressure at tair (median "
                f"{np.median(ratio):.3g} times it), which no air can; {fix} (or list vpd in "
                "[input] accept_units)"), None
    # values too small: a larger unit read as the declared one (kPa read as hPa, or kPa
    # and hPa read as a declared Pa); each candidate with its factor, smallest first
    scale = {unit: to_canonical(np.array([1.0]), "vpd", unit)[0] for unit in units_for("vpd")}
    declared_scale = scale[declared] if declared in scale else 1.0
    larger = []
    for unit in units_for("vpd"):            # hPa before its synonym mbar
        factor = scale[unit] / declared_scale
        if factor > 1.5 and factor not in [known for known, _ in larger]:
            larger.append((factor, unit))
    larger.sort()
    if not larger:
        return None, None
    rh = converted.get("rh")
    if rh is not None and not np.nanmax(rh, initial=-np.inf) > 1.0:
        # RH written as a fraction (at most 1 %, which no surface air stays below) gives
        # no deficit to compare with: its own check names it (round mistakes60: RH as a
        # fraction beside a right VPD in kPa was refused naming the VPD as psi)
        rh = None
    if rh is not None:
        expected = saturation * (1.0 - np.clip(rh[both], 0.0, 100.0) / 100.0)
        usable = np.isfinite(expected) & (expected > 2.0)
        if usable.sum() >= 48:
            median = float(np.median(vpd[both][usable] / expected[usable]))
            for factor, unit in larger:
                if 0.7 <= median * factor <= 1.4:
                    return (f"column {columns['vpd']!r} (vpd, read as {shown!r}) is a median "
                            f"{median:.3g} times the VPD computed from rh and tair: the file "
                            f"is in {unit}: set [input.units] vpd = \"{unit}\" (or list vpd "
                            "in [input] accept_units)"), None
    # from the values alone only an SI prefix read as another (kPa as hPa) is named: psi
    # and inHg are no prefix's slip (review70: since layouts49 a declared kPa of a record
    # humid throughout was refused naming inHg, where no larger unit had judged it)
    larger = [(factor, unit) for factor, unit in larger
              if float(np.log10(scale[unit])).is_integer()]
    if not larger:
        return None, None
    # VPD cannot exceed the saturation vapour pressure, so a file in the next larger unit
    # (factor f) read as the declared one stays below 1/f of it: 0.1 for kPa read as hPa,
    # 0.01 for hPa read as Pa. A bound of 0.1 for a declared Pa would call a correct rain
    # spell in Pa (relative humidity 90-100 % for days (m)) hPa.
    limit = min(0.1, 1.0 / larger[0][0])
    if not np.percentile(ratio, 99) < limit:
        return None, None
    fits = [unit for factor, unit in larger
            if np.percentile(ratio * factor, 99) >= 0.1
            and np.mean(vpd[both] * factor > 1.1 * saturation + 1.0) <= IMPLAUSIBLE_SHARE]
    unit = fits[0] if fits else larger[0][1]
    text = (f"column {columns['vpd']!r} (vpd, read as {shown!r}): 99 % of values stay below "
            f"{limit:g} of the saturation vapour pressure at tair (relative humidity would "
            f"never drop below {100.0 * (1.0 - limit):g} %), as VPD in {unit} read as {shown} "
            "does; set [input.units] vpd "
            f"= \"{unit}\" (or list vpd in [input] accept_units)")
    warm = tair[both] >= 20.0
    # Air at 20 °C or more stays above 90 % relative humidity through whole days only in
    # fog; over a week with many warm records it dries below 90 % somewhere (common
    # practice: daytime humidity minima of humid tropical forests are about 60-80 % (m)).
    if warm.sum() >= _MIN_ACTIVE_RECORDS and _enough_days(int(both.sum()), interval_minutes):
        return text, None
    return None, text


def _tair_message(converted: dict, units: dict, columns: dict, interval_minutes: int):
    """Air temperature in °F read as °C, where few values leave the plausible range.

    At a cool site (summer maxima near 20 °C, 68 °F) fewer than 5 % of the °F values
    exceed the 60 °C range limit, so the range check only warns, and the whole record
    would be read 1.8 T + 32 degrees too warm. A month's median above 45 °C gives it away.
    """
    tair = converted.get("tair")
    if tair is not None and units.get("tair") in ("°F", "degF"):
        return _declared_fahrenheit("tair", converted, columns, interval_minutes)
    if tair is None or not reads_as_canonical("tair", units.get("tair")):
        return None
    per_block = int(30 * 1440 // interval_minutes)
    blocks = tair.size // per_block
    if blocks == 0:
        return None
    grid = np.asarray(tair[:blocks * per_block], dtype=float).reshape(blocks, per_block)
    enough = np.isfinite(grid).sum(axis=1) >= (2 * per_block) // 3
    if not enough.any():
        return None
    with np.errstate(invalid="ignore"):
        warmest = float(np.nanmax(np.nanmedian(grid[enough], axis=1)))
    if not _WARMEST_MONTH < warmest <= _WARMEST_MONTH * 9.0 / 5.0 + 32.0:
        return None     # a plausible °C record, or beyond °F too (kelvin: the range check)
    found = (f"column {columns['tair']!r} (tair, read as °C): its warmest 30 days have a "
             f"median of {warmest:.1f} °C, warmer than any month anywhere (about 42.5 °C at "
             "most); the values look like °F "
             f"({(warmest - 32.0) * 5.0 / 9.0:.1f} °C)")
    if _whole_scaled("tair", np.asarray(tair, dtype=float), units.get("tair")) == "0.1 °C":
        present = np.asarray(tair, dtype=float)
        present = present[np.isfinite(present)]
        if _outside("tair", to_canonical(present, "tair", "°F")).any():
            # read as °F some values leave the range (-88 for -8.8 °C is -67 °C): tenths
            return (f"column {columns['tair']!r} (tair, read as °C): its warmest 30 days "
                    f"have a median of {warmest:.1f} °C, warmer than any month anywhere; "
                    "every value is a whole number and, read as tenths of a degree, all are "
                    f"plausible (a logger storing integers: {warmest / 10.0:.1f} °C), "
                    "where read as °F some are not: set [input.units] tair = \"0.1 °C\" "
                    "(or list tair in [input] accept_units)")
        # whole numbers: whole °F (old stations) and tenths of a degree (a logger's integer
        # storage) both read them plausibly, and they differ by far (round layouts32)
        return (f"{found} or like tenths of a degree written as whole numbers (a logger "
                f"storing integers: {warmest / 10.0:.1f} °C): set [input.units] tair = \"°F\" "
                "or tair = \"0.1 °C\", as the logger's program says (or list tair in "
                "[input] accept_units)")
    return f"{found}: set [input.units] tair = \"°F\" (or list tair in [input] accept_units)"


#: Least median u* [m s-1] of a record of 30 days or more read in a declared unit other
#: than m s-1 (round mistakes48): u* in m s-1 declared "cm s-1" reads a hundredth, a
#: median of 0.002-0.007 m s-1 for towers' 0.2-0.7 (m; :data:`_LEAST_MEDIAN`), which the
#: range [0, 5] lets through and the canopy's floor (0.01 short, 0.1 tall) then turns
#: into a filter of every night (the run stopped with "no usable night record"). 0.02
#: is our choice: a factor of 10 below the lowest typical median, 3 above the
#: hundredth of it.
_USTAR_LEAST_MEDIAN = 0.02


def _ustar_message(converted: dict, units: dict, columns: dict, interval_minutes: int):
    """u* read a hundred times too small: a unit declared for values in m s-1."""
    ustar = converted.get("ustar")
    declared = units.get("ustar")
    if ustar is None or reads_as_canonical("ustar", declared):
        return None
    present = ustar[np.isfinite(ustar) & (ustar > 0)]      # 0: a logger's code for missing
    if not _enough_days(present.size, interval_minutes):
        return None
    median = float(np.median(present))
    as_canonical = median / float(to_canonical(np.array([1.0]), "ustar", declared)[0])
    if median >= _USTAR_LEAST_MEDIAN or not _LEAST_MEDIAN["ustar"] <= as_canonical <= 1.5:
        return None
    return (f"column {columns.get('ustar', 'ustar')!r} (ustar, read as {declared!r}): its "
            f"median is {median:.4f} m s-1, where towers' friction velocity has a median of "
            "0.2-0.7 m s-1 (below the canopy's u* floor, every night would be filtered); "
            f"read as 'm s-1' the median is {as_canonical:.2f}: set [input.units] "
            "ustar = \"m s-1\" (or list ustar in [input] accept_units)")


def _tsoil_message(converted: dict, units: dict, columns: dict, interval_minutes: int):
    """Soil temperature in °F or K read as °C, where few values leave the plausible range.

    Near the surface the soil follows the air: over the same records their medians differ
    by a few K. A soil of a cool site in °F (32-59) passes the 80 °C range limit and would
    be read 30 K or more above the air, a respiration driver 1.8 T + 32 too warm.
    """
    tsoil, tair = converted.get("tsoil"), converted.get("tair")
    if tsoil is not None and tair is not None and units.get("tsoil") in ("°F", "degF"):
        return _declared_fahrenheit("tsoil", converted, columns, interval_minutes)
    if tsoil is None or tair is None or not reads_as_canonical("tsoil", units.get("tsoil")):
        return None
    both = np.isfinite(tsoil) & np.isfinite(tair)
    if not _enough_days(int(both.sum()), interval_minutes):
        return None
    soil, air = float(np.median(tsoil[both])), float(np.median(tair[both]))
    if soil - air <= _SOIL_ABOVE_AIR or soil <= _SOIL_FAHRENHEIT_MEDIAN:
        return None
    water = _water_content_like(tsoil, tair, interval_minutes)
    if water:
        return (f"column {columns['tsoil']!r} (tsoil, read as °C): its median is {soil:.1f} "
                f"°C, {soil - air:.1f} K above the air temperature's ({air:.1f} °C) over the "
                "same records, where a soil near the surface stays within a few K of the air; "
                f"{water}: the values look like a volumetric soil water content in percent "
                "(0-60; as a fraction, m3 m-3, 0-0.6), a neighbouring column of a soil station, "
                "not a temperature in any unit: map the soil temperature's column as tsoil "
                "in [input.columns], or leave tsoil out")
    # the unit named is the one that brings the soil's median nearest the air's: kelvin
    # (soil - 273.15) puts a soil read as 280 °C at 7 °C, °F would put it at 138 °C
    candidates = {"°F": (soil - 32.0) * 5.0 / 9.0, "K": soil - 273.15}
    unit = min(candidates, key=lambda name: abs(candidates[name] - air))
    return (f"column {columns['tsoil']!r} (tsoil, read as °C): its median is {soil:.1f} °C, "
            f"{soil - air:.1f} K above the air temperature's ({air:.1f} °C) over the same "
            "records, where a soil near the surface stays within a few K of the air; the "
            f"values look like {unit} ({candidates[unit]:.1f} °C): set [input.units] "
            f"tsoil = \"{unit}\" (or list tsoil in [input] accept_units)")


#: Largest ratio of a column's median half-day change to its median whole-day change
#: read as no daily course (leftovers53). A daily course of amplitude A adds about 2A to
#: the half-day changes and nothing to the whole-day ones; a slow drift or random walk
#: gives ratios at or below 1 (sqrt(1/2) for a random walk). Our choice of 1.2: the
#: invented grassland's soil at 5 cm gives 1.78, its air 3.26, a soil water content
#: with a random walk 0.73.
_NO_DAILY_COURSE = 1.2
#: Least correlation of a soil temperature's daily means with the air's that any unit of
#: temperature keeps (an increasing linear function of °C; the soil follows the air's
#: seasons, r near 0.9 and more at 5 cm (m)). Our choice of 0.5; a soil water content,
#: wet in winter and dry in summer, runs against the air (leftovers53: r = -0.9).
_SEASON_FOLLOWS_AIR = 0.5


def _water_content_like(tsoil, tair, interval_minutes: int) -> str | None:
    """The evidence that a column mapped as tsoil holds no temperature, or None.

    All present values within 0-60 (a volumetric water content in percent; as a fraction,
    0-0.6, it would not be far above the air), no daily course (:data:`_NO_DAILY_COURSE`)
    and daily means that do not follow the air's (:data:`_SEASON_FOLLOWS_AIR`): in °F or
    K a soil temperature would keep both its daily course at 5 cm and its seasons
    (round mistakes50: soil water in % as tsoil was refused as a unit "changed within
    the record", °F before May and °C after).

    Parameters
    ----------
    tsoil, tair : numpy.ndarray
        The column mapped as tsoil and the air temperature [°C], record by record.
    interval_minutes : int
        Record interval [min].

    Returns
    -------
    str or None
        A clause naming the three facts, or None where any fails.

    References
    ----------
    Hillel, D. (1998). Environmental Soil Physics. Academic Press (the daily temperature
    wave damped with depth, the volumetric water contents of soils up to about 0.6) (m).
    """
    present = tsoil[np.isfinite(tsoil)]
    if present.size == 0 or present.min() < 0.0 or present.max() > 60.0:
        return None
    half, day = max(1, 720 // interval_minutes), max(1, 1440 // interval_minutes)
    if tsoil.size <= 2 * day:
        return None
    ratio = float(np.nanmedian(np.abs(tsoil[half:] - tsoil[:-half]))
                  / max(np.nanmedian(np.abs(tsoil[day:] - tsoil[:-day])), 1e-9))
    days = tsoil.size // day
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)       # a day without a value
        means = [np.nanmean(values[:days * day].reshape(days, day), axis=1)
                 for values in (tsoil, tair)]
    both = np.isfinite(means[0]) & np.isfinite(means[1])
    if both.sum() < 30 or ratio > _NO_DAILY_COURSE:
        return None
    season = float(np.corrcoef(means[0][both], means[1][both])[0, 1])
    if not season < _SEASON_FOLLOWS_AIR:
        return None
    return (f"all its values lie within {present.min():.1f}-{present.max():.1f}, with no "
            f"daily course (half-day changes {ratio:.2f} times the whole-day ones, where a "
            "soil near the surface warms by day) and daily means that do not follow the "
            f"air's (correlation {season:.2f})")


def _declared_fahrenheit(name: str, converted: dict, columns: dict, interval_minutes: int,
                         snow_soil_max: float = _SNOW_SOIL_MAX) -> str | None:
    """A temperature declared in °F whose file is in °C, or None.

    Read as °F, a °C record comes out (T - 32) / 1.8: a summer of 20 °C as -6.7 °C, still
    inside the plausible range. Two measured facts give it away where the values read as
    °C fit and read as °F do not: VPD above the saturation vapour pressure at the air
    temperature (in more than :data:`IMPLAUSIBLE_SHARE` of records), and a soil near the
    surface more than ``_SOIL_ABOVE_AIR`` K from the air over the same records (for the
    air, only where the soil is above `snow_soil_max`, default ``_SNOW_SOIL_MAX``: a snow
    cover keeps a soil near 0 °C 20 K and more above a winter air, whose °F numbers then
    lie near the soil's; :func:`mixup_messages` warns there). A record
    truly in °F is not read as °C where a month would be warmer than ``_WARMEST_MONTH``.
    """
    values = converted[name]
    as_celsius = values * 9.0 / 5.0 + 32.0             # the file's numbers, as written
    present = as_celsius[np.isfinite(as_celsius)]
    if not _enough_days(present.size, interval_minutes) or np.median(present) > _WARMEST_MONTH:
        return None
    evidence = None
    other = converted.get("tsoil" if name == "tair" else "tair")
    if other is not None:
        both = np.isfinite(values) & np.isfinite(other)
        if _enough_days(int(both.sum()), interval_minutes):
            read, written = float(np.median(values[both])), float(np.median(as_celsius[both]))
            reference = float(np.median(other[both]))
            # air far below a soil near 0 °C is a snow cover, in either unit
            snow = name == "tair" and reference <= snow_soil_max
            if (not snow and abs(read - reference) > _SOIL_ABOVE_AIR
                    and abs(written - reference) <= _SOIL_ABOVE_AIR):
                evidence = (f"its median is {read:.1f} °C, {abs(read - reference):.1f} K from "
                            f"the {'soil' if name == 'tair' else 'air'} temperature's "
                            f"({reference:.1f} °C) over the same records, where a soil near "
                            "the surface stays within a few K of the air")
    vpd = converted.get("vpd")
    if evidence is None and name == "tair" and vpd is not None:
        both = np.isfinite(vpd) & np.isfinite(values)
        if _enough_days(int(both.sum()), interval_minutes):
            read = np.mean(vpd[both] > 1.1 * saturation_vapour_pressure(values[both]) + 1.0)
            written = np.mean(vpd[both] > 1.1 * saturation_vapour_pressure(as_celsius[both])
                              + 1.0)
            if read > IMPLAUSIBLE_SHARE and written <= IMPLAUSIBLE_SHARE:
                evidence = ("VPD exceeds the saturation vapour pressure at it in "
                            f"{100 * read:.0f} % of records, which no air can, and in "
                            f"{100 * written:.0f} % with the "
                            "values read as °C")
    if evidence is None:
        return None
    return (f"column {columns[name]!r} ({name}, read as '°F'): {evidence}; the values look "
            f"like °C: set [input.units] {name} = \"°C\" (or list {name} in [input] "
            "accept_units)")


#: Largest ratio of PPFD [µmol m-2 s-1] to the potential radiation [W m-2] with the sun
#: high: 2.1 µmol J-1 (``PPFD_PER_RG``) times 1.3, global radiation's brief cloud-edge
#: enhancement above the potential (common practice).
_PPFD_REACH = 2.1 * 1.3


def _rg_message(converted: dict, units: dict, columns: dict, interval_minutes: int,
                potential):
    """Rg in kW m-2 or in MJ m-2 per interval read as W m-2, or net radiation mapped as Rg."""
    rg = converted.get("rg")
    if rg is None or potential is None or not reads_as_canonical("rg", units.get("rg")):
        return None
    dark = (np.asarray(potential) <= 0.0) & np.isfinite(rg)
    if dark.sum() >= _MIN_ACTIVE_RECORDS and np.median(rg[dark]) < _NIGHT_RG_FLOOR:
        return (f"column {columns['rg']!r} (rg): with the sun down its median is "
                f"{np.median(rg[dark]):.0f} W m-2, where a pyranometer reads about 0 (a few "
                "W m-2 of thermal offset); the values look like net radiation (or a sensor "
                "with a large offset): map global (incoming short-wave) radiation as rg "
                "(or list rg in [input] accept_units)")
    bright = (np.asarray(potential) > 400.0) & np.isfinite(rg)
    if bright.sum() < _MIN_ACTIVE_RECORDS:
        return None
    values = rg[bright]
    high = (np.asarray(potential) > 600.0) & np.isfinite(rg)
    if high.sum() >= _MIN_ACTIVE_RECORDS:
        ratio = rg[high] / np.asarray(potential)[high]
        # Global radiation at the surface stays below the radiation at the top of the
        # atmosphere except for brief cloud-edge enhancement; clear-sky transmittance is
        # about 0.75 (common practice). PPFD in µmol m-2 s-1 is about 2.1 times Rg in
        # W m-2 (fluxpart.variables.PPFD_PER_RG), so with the sun high it sits above it.
        if np.median(ratio) > 0.8 and np.percentile(ratio, 90) > 1.25:
            seconds = interval_minutes * 60.0
            found = (f"column {columns['rg']!r} (rg, read as W m-2): with the sun high, half "
                     f"of the values exceed {np.median(ratio):.2f} times the radiation at the "
                     "top of the atmosphere and a tenth exceed "
                     f"{np.percentile(ratio, 90):.2f} times it, which global radiation cannot")
            # PPFD reaches about 2.1 x 1.3 = 2.7 times the potential radiation (cloud-edge
            # enhancement, common practice); far beyond it the values are energy summed
            # over each record (J m-2: the interval's seconds times W m-2)
            if np.median(ratio) > 10.0 * _PPFD_REACH:
                return (f"{found}, nor PPFD; the values look like an energy summed over each "
                        f"record (J m-2: {seconds:.0f} times W m-2 at {interval_minutes} "
                        "minutes), which is not read: write it as W m-2 (divided by "
                        f"{seconds:.0f}) in a copy, or as MJ m-2 and set [input.units] rg = "
                        "\"MJ m-2\" (or list rg in [input] accept_units)")
            # PPFD (2.1 x W m-2) and kJ m-2 per record (the interval's seconds / 1000 x
            # W m-2: 1.8 at 30 minutes, 3.6 at 60) are told apart only by their scale: the
            # likelier is named first, by how near the values' clear-sky ratio (their 90th
            # percentile over the potential) comes to each one's times the clear-sky
            # transmittance of about 0.75 (common practice), as for kW and MJ m-2 below
            clear = float(np.percentile(ratio, 90))
            ppfd = ("the values look like PPFD in µmol m-2 s-1: map the column as ppfd in "
                    "[input.columns] instead of rg")
            kilojoules = (f"an energy summed over each record in kJ m-2 ({seconds / 1000.0:.2g} "
                          f"times W m-2 at {interval_minutes} minutes), which is not read: "
                          f"write it as W m-2 (divided by {seconds / 1000.0:.4g}) in a copy")
            if (abs(math.log(clear / (seconds / 1000.0 * 0.75)))
                    < abs(math.log(clear / (PPFD_PER_RG * 0.75)))):
                return (f"{found}; the values look most like {kilojoules}; or like PPFD in "
                        "µmol m-2 s-1, which they fit less well: map the column as ppfd in "
                        "[input.columns] instead of rg (or list rg in [input] accept_units)")
            return (f"{found}; {ppfd}; or like {kilojoules}, which they fit less well (or "
                    "list rg in [input] accept_units)")
    # With the sun well up (potential radiation above 400 W m-2) even a thick overcast
    # passes 10 % or more of it (common practice), so a W m-2 record shows tens to
    # hundreds; kW m-2 or MJ m-2 per interval show numbers below about 5.
    if not (np.percentile(values, 90) < 5.0 and np.percentile(values, 90) > 0.05):
        return None
    # ... and at every hour: W m-2 small only at the hours the settings call bright (high
    # at others) is a clock or site position hours off, which the clock check names
    if np.percentile(rg[np.isfinite(rg)], 99) >= 5.0:
        return None
    ratio_kw = float(np.percentile(values * 1000.0 / np.asarray(potential)[bright], 90))
    per_interval = 1e6 / (interval_minutes * 60.0)
    ratio_mj = ratio_kw * per_interval / 1000.0
    # an old actinograph's calories per cm2 and minute (round layouts32): 697 W m-2 each
    ratio_cal = ratio_kw * LANGLEY_PER_MINUTE / 1000.0
    # clear-sky global radiation is about 0.75 of the potential (common practice)
    candidates = sorted([(abs(math.log(ratio_kw / 0.75)), "kW m-2"),
                         (abs(math.log(ratio_mj / 0.75)), "MJ m-2"),
                         (abs(math.log(ratio_cal / 0.75)), "cal cm-2 min-1")])
    best, others = candidates[0][1], [unit for _, unit in candidates[1:]]
    # the three scales lie within a factor 1.8 at 30-minute records (1000, 697, 556 W
    # m-2 per unit): cloud moves the ratio as much, so the others are named as readings
    return (f"column {columns['rg']!r} (rg, read as W m-2): with the sun well up, 90 % of "
            f"values are below {np.percentile(values, 90):.3g}, a thousandth of what a "
            f"pyranometer in W m-2 shows; the values look like {best!r}"
            + (" per interval" if best == "MJ m-2" else "")
            + f": set [input.units] rg = \"{best}\" (or \"{others[0]}\" or "
            f"\"{others[1]}\", which the values fit less well and which give "
            "other budgets: the logger's manual says which; or list rg in [input] "
            "accept_units)")


#: Smallest 99th percentile of Rg / potential radiation, with the sun high, that Rg (or Rg
#: taken from PPFD) may show before it is called too dark (Rg in W m-2 mapped as ppfd, PAR
#: in W m-2 mapped as rg, about 0.46 Rg (m)). Our
#: choice: clear skies pass about 0.75 of the potential radiation (common practice; 0.78 to
#: 0.81 on the generated site-years of fluxpart.scenarios) and any site has 1 % of its
#: high-sun records clear, while Rg in W m-2 divided by 2.10 stays below about 0.8 / 2.1 =
#: 0.38; 0.5 leaves a third for a dirty or partly shaded PPFD sensor and the ±10 % of the
#: PPFD-to-Rg ratio.
_PPFD_CLEAR_MIN = 0.5
#: Days of present values the too-dark check needs before it refuses [days]; shorter
#: records only warn. A whole sky can stay below half the clear-sky transmission for
#: weeks: a monsoon's active spell lasts one to three weeks, a wildfire smoke episode
#: (aerosol optical depth 3 and more) about as long (m); the monsoon's active and break
#: spells alternate with a period of 30-60 days (the intraseasonal oscillation (m)), so
#: 60 days hold a break with clear hours.
_TOO_DARK_MIN_DAYS = 60


def _too_dark_message(name: str, converted: dict, units: dict, columns: dict,
                      interval_minutes: int, potential):
    """Radiation read about half as bright as any sky allows, or None: global radiation
    in W m-2 mapped as ppfd (divided by 2.10), or PAR in W m-2 (about 0.46 of Rg) mapped
    as rg.

    Returns (refusal, warning) as :func:`_vpd_messages` does: a record of
    :data:`_TOO_DARK_MIN_DAYS` days or more refuses, a shorter one (which a spell of
    overcast or smoke can hold throughout) only warns.
    """
    values = converted.get(name)
    if (values is None or potential is None or (name == "ppfd" and "rg" in converted)
            or (name == "rg" and not reads_as_canonical("rg", units.get("rg")))):
        return None, None
    high = (np.asarray(potential) > 600.0) & np.isfinite(values)
    if high.sum() < _MIN_ACTIVE_RECORDS:
        return None, None
    scale = 1.0 / PPFD_PER_RG if name == "ppfd" else 1.0
    clear = float(np.percentile(values[high] * scale / np.asarray(potential)[high], 99))
    if clear >= _PPFD_CLEAR_MIN or clear <= 0.0:
        return None, None
    # ... and dark where the settings put no sun: radiation at those hours is a clock or
    # site position hours off (the clock check names it), not a unit or quantity
    dark = (np.asarray(potential) <= 0.0) & np.isfinite(values)
    if dark.sum() < _MIN_ACTIVE_RECORDS or np.percentile(values[dark] * scale, 99) > 50.0:
        return None, None
    found = (f"with the sun high, its brightest 1 % reach only {clear:.2f} times the "
             "radiation at the top of the atmosphere, where clear skies pass about 0.75 of it")
    if name == "ppfd":
        text = (f"column {columns['ppfd']!r} (ppfd, converted to rg by "
                f"1/{PPFD_PER_RG:.2f}): {found}; the values look like global radiation in "
                "W m-2: map the column as rg in [input.columns] instead of ppfd (or list "
                "ppfd in [input] accept_units)")
    else:
        night = float(np.median(values[dark]))
        net = (f"net radiation (with the sun down its median is {night:.0f} W m-2, below a "
               "pyranometer's thermal offset of a few W m-2), " if night < _NIGHT_NET_HINT
               else "")
        # newuser57: the reflected (outgoing) short-wave channel of a four-component
        # radiometer mapped as rg (the surface's albedo, about 0.1 to 0.3 of the
        # incoming: Oke 1987, Boundary Layer Climates, table 1.1 (m)) went unnamed
        text = (f"column {columns['rg']!r} (rg): {found}; the values look like {net}PAR in "
                "W m-2 (about 0.46 of global radiation), the reflected (outgoing) "
                "short-wave radiation (the surface's albedo, about 0.1 to 0.3 of global "
                "radiation) or a shaded or soiled sensor: map global (incoming short-wave) "
                "radiation as rg, or PPFD as ppfd (or list rg in [input] accept_units)")
    if int(np.isfinite(values).sum()) * interval_minutes >= _TOO_DARK_MIN_DAYS * 24 * 60:
        return text, None
    return None, (text + f"; over less than {_TOO_DARK_MIN_DAYS} days a sky overcast or "
                  "smoky throughout (a monsoon spell, a smoke episode) reads so too")


def mixup_messages(converted: dict, units: dict, columns: dict, interval_minutes: int,
                   potential=None, missing=(), stamps=None) -> tuple[dict, list]:
    """Find unit mix-ups that the plausible ranges let through.

    Parameters
    ----------
    converted : dict
        Canonical name -> values in the canonical unit (NaN = missing), all of one
        length, one value per record.
    units : dict
        Canonical name -> declared unit (absent = canonical).
    columns : dict
        Canonical name -> file column (for messages).
    interval_minutes : int
        Record interval [minutes].
    potential : array_like, optional
        Potential (extraterrestrial) radiation of each record [W m-2]; enables the
        Rg check.
    missing : tuple, optional
        Missing-value codes in force (a declared 0 turns the zero-code check off).
    stamps : pandas.DatetimeIndex, optional
        Interval starts of the records; enables the month-by-month checks (NEE unit
        and sign, RH as a fraction, Rg unit).

    Returns
    -------
    refusals : dict
        Canonical name -> one-line message, for mix-ups found with confidence.
    warnings : list of str
        Suspicions on records that cannot tell for sure.
    """
    refusals, warnings = {}, []
    month_rows = _month_rows(stamps)        # the months of every month-by-month check
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        refuse, warn = _zero_code_message(converted, columns, interval_minutes, missing)
        if refuse:
            refusals["nee"] = refuse
        if warn:
            warnings.append(warn)
        if "nee" not in refusals:
            refuse, warn = _nonzero_code_message(converted, units, columns, interval_minutes,
                                                 missing)
            if refuse:
                refusals["nee"] = refuse
            if warn:
                warnings.append(warn)
        if "nee" not in refusals:
            refuse, warn = _nee_message(converted, units, columns, interval_minutes, potential)
            if refuse:
                refusals["nee"] = refuse
            if warn:
                warnings.append(warn)
            if not refuse and reads_as_canonical("nee", units.get("nee")):
                # a running mean's quiet noise is no unit in any month (round mistakes29)
                smoothed = ("nee" in converted
                            and _smoothed_night(converted["nee"], converted, potential))
                months = _months_refused(
                    lambda part, sun: _nee_message(part, units, columns, interval_minutes,
                                                   sun, smoothed)[0],
                    converted, potential, month_rows)
                # a dormant season is small by nature; a unit steps (round falsealarm51)
                months = stepped_months(converted.get("nee"), stamps, months,
                                        1000.0 / CO2_MOLAR_MASS)
                warnings += _changed_months_warning(
                    "nee", columns, "a flux 22.7 times too small (mg CO2 m-2 s-1)", months)
        if "nee" not in refusals:
            refuse, warn = _nee_sign_message(converted, columns, interval_minutes, potential)
            if refuse:
                refuse = _shifted_not_reversed(converted, columns, interval_minutes,
                                               potential) or refuse
                refusals["nee"] = refuse
            if warn:
                warnings.append(warn)
            # a sign that changed within the record: months with both backwards (a month
            # holds fewer records to tell by, so this only warns). A changed sign turns the
            # night's sign against the rest of the record's, so the months are named only
            # where the nights of the other months are a release: where they are an uptake
            # too (a desert's nights with abiotic uptake (m)), a month of rain-pulse release
            # by day is not a changed sign. (Judged on the other months, not the whole
            # record: a sign changed for half a year, a second file of another convention,
            # turns the whole record's night median negative.)
            if not (refuse or warn):
                months = _months_refused(
                    lambda part, sun: _nee_sign_message(part, columns, interval_minutes,
                                                        sun)[0],
                    converted, potential, month_rows)
                if months and _night_median_outside(converted, potential, stamps,
                                                    months) >= 0.0:
                    warnings += _changed_months_warning(
                        "nee", columns, "NEE with the opposite sign (negative night "
                        "median, uptake tail shorter than the release tail)", months)
        refuse = _storage_sign_message(converted, columns, potential, stamps)
        if refuse:
            refusals["storage"] = refuse
        refuse = _ustar_message(converted, units, columns, interval_minutes)
        if refuse:
            refusals["ustar"] = refuse
        refuse = _tair_message(converted, units, columns, interval_minutes)
        if refuse:
            refusals["tair"] = refuse
        elif units.get("tair") in ("°F", "degF") and "tsoil" in converted:
            # air far below a soil near 0 °C: a snow cover in °F, or °C declared as °F
            either = _declared_fahrenheit("tair", converted, columns, interval_minutes,
                                          snow_soil_max=-math.inf)
            if either:
                warnings.append(either.split("; the values look like")[0] + (
                    "; a snow cover holds a soil near 0 °C that far above a winter air, so "
                    "°F may be right: if the file is in °C, set [input.units] tair = \"°C\""))
        else:   # the soil and VPD checks compare with tair, so need a right tair
            refuse_soil = _tsoil_message(converted, units, columns, interval_minutes)
            if refuse_soil:
                refusals["tsoil"] = refuse_soil
            elif "tsoil" in columns:
                # a month of soil in °F (a logger program changed for a while): the
                # whole record's median hides it, the month's alone does not
                warnings += _changed_within(
                    lambda part, sun: _tsoil_message(part, units, columns, interval_minutes),
                    "tsoil", columns, "a soil temperature in °F or K (a median above 25 °C "
                    "and more than 15 K above the air's)", converted, potential, month_rows)
            # months whose RH is a fraction give no basis for the VPD the humidity
            # allows (round mistakes55: RH as a fraction from July made vpd read as
            # inHg); the rh warning below names them
            humidity_basis = _without_rh_fraction_months(converted, units, potential, stamps,
                                                         month_rows)
            refuse, warn = _vpd_messages(humidity_basis, units, columns, interval_minutes)
            if refuse:
                refusals["vpd"] = refuse
            if warn:
                warnings.append(warn)
            # a unit that changed within the record: months that alone are refused (a humid
            # month that only warns is not counted: fog or a wet season can hold it)
            if not (refuse or warn) and "vpd" in columns:
                warnings += _changed_within(
                    lambda part, sun: _vpd_messages(part, units, columns, interval_minutes)[0],
                    "vpd", columns, "VPD in another unit (a tenth or ten times the VPD "
                    "that tair and the humidity allow)", humidity_basis, potential, month_rows)
        rh = converted.get("rh")
        if rh is not None and reads_as_canonical("rh", units.get("rh")) and not _rh_fraction(rh):
            warnings += _changed_within(
                lambda part, sun: _rh_fraction(part["rh"]), "rh", columns,
                "a fraction (all at most 1.05 %, which no surface air stays below for a "
                "month)", converted, potential, month_rows)
        def too_dark(name):
            """Rg mapped as ppfd or PAR as rg: a refusal, or a warning on a short record."""
            refuse, warn = _too_dark_message(name, converted, units, columns,
                                             interval_minutes, potential)
            if refuse:
                refusals[name] = refuse
            if warn:
                warnings.append(warn)

        too_dark("ppfd")
        refuse = _rg_message(converted, units, columns, interval_minutes, potential)
        if refuse:
            refusals["rg"] = refuse
        else:
            too_dark("rg")
        if "rg" not in refusals:
            warnings += _changed_within(
                lambda part, sun: _rg_message(part, units, columns, interval_minutes, sun),
                "rg", columns, "another unit or quantity (kW m-2, MJ m-2, PPFD or net "
                "radiation)", converted, potential, month_rows)
    return refusals, warnings


_UNIT_SETTING = re.compile(r'set \[input\.units\] (\w+) = "([^"]+)"')
_OTHER_UNIT = re.compile(r'or (\w+) = "([^"]+)"')
_ACCEPT_CLAUSES = (re.compile(r' ?\(or list \w+ in \[input\] accept_units[^)]*\)'),
                   re.compile(r'; or list \w+ in \[input\] accept_units'))


#: Share of a frame's judged records that ``nee_flag`` may reject before the flag is
#: named as of the opposite meaning. The reader's rule for ``[input] flag_accept``
#: (:mod:`fluxpart.io`): a flag that rejects most records is more likely written with
#: the other convention (1 or True = good) than a site whose own checks discard most
#: of its data, where towers keep about 65 % of their records in all (Falge et al.
#: 2001 (m)). Our choice: half.
_FLAG_REJECTS_MOST = 0.5
#: Share beyond which the flag is refused (:func:`frame_refusal`): our choice.
_FLAG_REFUSE = 0.95


def _flag_rejects_most(frame, share: float) -> str | None:
    """The warning where a frame's ``nee_flag`` (non-zero = reject) rejects most records
    with an NEE value (all records where the frame has no ``nee``).

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology, 107, 43-69 (m).
    """
    if "nee_flag" not in frame.columns:
        return None
    values = np.asarray(frame["nee_flag"], dtype=float)
    judged = np.isfinite(values)
    # judged over the records with an NEE value, as the reader's rule (review41): a flag
    # written "bad" wherever NEE is missing (common practice) rejects nothing more
    with_nee = "nee" in frame.columns
    if with_nee:
        judged &= np.isfinite(np.asarray(frame["nee"], dtype=float))
    rejected = judged & (values != 0.0)
    if judged.sum() < 48 or rejected.sum() <= share * judged.sum():
        return None
    held = ", ".join(f"{value:g}" for value in np.unique(values[judged])[:10])
    records = "records with an NEE value" if with_nee else "records"
    return (f"column 'nee_flag': {int(rejected.sum())} of {int(judged.sum())} {records} "
            f"({100 * (rejected.sum() / judged.sum()):.1f} %) are rejected, as process() keeps a "
            "record "
            f"only where nee_flag is 0 (or missing); the flags hold {held}: where 1 (or True) "
            "means a good record, pass (frame[\"nee_flag\"] == 0) instead")


def frame_messages(frame, potential=None, interval_minutes: int = 30,
                   accept_units=()) -> list:
    """Unit mix-ups in a caller's frame of canonical columns, as warnings.

    :func:`fluxpart.process` takes a frame in the canonical units and has no
    ``[input.units]``; a frame built by hand (NEE in mg CO2 m-2 s-1, VPD in kPa, Rg in
    kW m-2, air temperature in °F) would otherwise change the numbers without a word.
    The checks of :func:`mixup_messages` run on it and every finding, refusal or
    suspicion, is returned as a warning naming the conversion
    (:func:`fluxpart.variables.to_canonical`) in place of the site-config settings.
    RH as a fraction is named and left out of the VPD checks, which would misread it.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical columns (float) on a DatetimeIndex of interval starts.
    potential : array_like, optional
        Potential radiation of each record [W m-2]; enables the Rg check.
    interval_minutes : int, optional
        Record interval [minutes].
    accept_units : sequence of str, optional
        Variables a site config's ``[input] accept_units`` kept as they are (a frame of
        :func:`fluxpart.io.read_table`, whose ``attrs`` carry them): their refusals
        are left out (the reader warned of them already); suspicions stay.

    Returns
    -------
    list of str
        One line per finding, naming the column and the unit its values look like.
    """
    converted = {name: frame[name].to_numpy(dtype=float) for name in frame.columns
                 if name in READER_VARIABLES and name != "nee_flag"}
    found = []
    if "rh" in converted and "rh" not in accept_units and _rh_fraction(converted["rh"]):
        del converted["rh"]
        found.append("column 'rh' (rh, read as %): all values are at most 1.05 %, which no "
                     "surface air stays below; it looks like a fraction: set [input.units] "
                     "rh = \"fraction\"")
    flag = _flag_rejects_most(frame, _FLAG_REJECTS_MOST)
    if flag:
        found.append(flag)
    found.extend(frame_code_messages(converted))
    if "nee" in converted:
        # another quantity on some days: the reader names it for files (round mistakes35)
        from .foreign_days import foreign_days
        days = foreign_days(converted["nee"], frame.index, READER_VARIABLES["nee"].minimum,
                            READER_VARIABLES["nee"].maximum, column="nee",
                            unit=READER_VARIABLES["nee"].unit)
        found.extend([days] if days else [])
    refusals, suspicions = mixup_messages(converted, {}, {name: name for name in converted},
                                          interval_minutes, potential, (), frame.index)
    lines = []
    kept = [message for name, message in refusals.items() if name not in accept_units]
    for message in [*found, *kept, *suspicions]:
        lines.append(_frame_text(message, interval_minutes))
    return lines


#: Least number of times a value outside a column's plausible range must occur in a
#: caller's frame to be named as a missing-data code [records]: the reader's rule of an
#: undeclared code (:func:`implausible_message`, a logger's code repeats exactly).
_FRAME_CODE_MIN_COUNT = 3


def frame_code_messages(converted: dict) -> list:
    """A logger's missing-data code left in a caller's frame, named per column.

    The file reader reads -9999 (and the codes of ``[input] missing``) as missing; a
    frame built by hand from a logger file (``pandas.read_csv`` without ``na_values``)
    keeps them as numbers. Screening rejects them as out of range, but nothing named
    them, and before round mistakes37 an Rg of -9999 by day made the record night
    (:func:`fluxpart.screening_stage.night_rg`). A value outside the column's plausible
    range (:data:`fluxpart.variables.READER_VARIABLES`) occurring
    :data:`_FRAME_CODE_MIN_COUNT` times or more is named: a measured quantity is
    continuous and does not repeat one impossible value exactly.

    Parameters
    ----------
    converted : dict
        Canonical name -> values in the canonical unit (float, NaN = missing).

    Returns
    -------
    list of str
        One line per column holding such a value, with its count and the fix.

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
    Exchange measured with eddy covariance technique. Biogeosciences 3, 571-583
    (physically plausible ranges screened before any processing) (m).
    """
    lines = []
    for name, values in converted.items():
        variable = READER_VARIABLES.get(name)
        if variable is None:
            continue
        present = values[np.isfinite(values)]
        code, count = most_repeated(present[_outside(name, present)])
        if count < _FRAME_CODE_MIN_COUNT:
            continue
        lines.append(f"column {name!r}: the value {code:g} occurs {count} times "
                     f"({100 * (count / present.size):.1f} % of its values), outside the plausible "
                     f"range [{variable.minimum:g}, {variable.maximum:g}] {variable.unit}: a "
                     "logger's missing-data code, read as missing; replace it with NaN in "
                     f"the frame (frame.replace({code:g}, numpy.nan)) so that no value of "
                     "it is taken for a reading")
    return lines


def _mostly_outside_without_a_code(name: str, present: np.ndarray) -> bool:
    """True where more than :data:`IMPLAUSIBLE_SHARE` of `present` (and at least 5 values)
    lie outside `name`'s plausible range once the most repeated outside value, where it
    occurs 3 times or more (a missing-data code, which screening reads as missing), is
    set aside: the reader's share rule of :func:`implausible_message` (round mistakes32)."""
    outside = _outside(name, present)
    code, count = most_repeated(present[outside])
    if count >= 3:
        outside &= present != code
    return bool(outside.mean() > IMPLAUSIBLE_SHARE and outside.sum() >= _IMPLAUSIBLE_MIN_COUNT)


def _frame_text(message: str, interval_minutes: int) -> str:
    """A reader's message about a column, worded for a caller's frame (the conversion
    to call in place of the ``[input.units]`` setting)."""
    message = _UNIT_SETTING.sub(
        lambda m: (f"convert the column from \"{m[2]}\" to {READER_VARIABLES[m[1]].unit} "
                   f"(fluxpart.variables.to_canonical(values, {m[1]!r}, \"{m[2]}\""
                   + (f", interval_minutes={interval_minutes}"
                      if (m[1], m[2]) in PER_INTERVAL_UNITS else "") + "))"),
        message)
    message = _OTHER_UNIT.sub(lambda m: f'or from "{m[2]}"', message)
    for clause in _ACCEPT_CLAUSES:
        message = clause.sub("", message)
    return "frame (process() takes canonical units): " + message.replace("the file", "the frame")


def frame_refusal(frame, interval_minutes: int = 30, accept_units=()) -> str | None:
    """The refusal of a caller's frame that a required column or the flag makes unusable.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical columns (float) on a DatetimeIndex of interval starts.
    interval_minutes : int, optional
        Record interval [minutes].
    accept_units : sequence of str, optional
        Variables a site config's ``[input] accept_units`` kept as they are.

    Returns
    -------
    str or None
        One line naming the first such column and its likely cause; None otherwise.

    Notes
    -----
    The reader refuses a column whose median lies outside its plausible range
    (:func:`implausible_message`: an air temperature in K, a flux 1000 times too
    large); here only the required variables (``nee``, ``rg``, ``tair``, ``vpd``,
    ``ustar``) are refused, since a soil temperature or RH so written is left out of
    its stage with a warning and the run goes on as before. In a caller's frame the same column was screened out record by record and
    the run stopped later on a symptom: an air temperature in K gave "nighttime
    partitioning (E0): no 15-day window has 6 measured night records spanning 5 K".
    A column whose median is plausible but more than :data:`IMPLAUSIBLE_SHARE` of whose
    values are not (the reader's share rule, one repeated code set aside as the missing
    value screening reads it as; u* left to the preflight's wind-speed rule, which names
    the cause) is refused too (round mistakes32): latent heat in
    W m-2 mapped as NEE (median 52, a third above 100) ran with the third screened out
    and the rest read as µmol m-2 s-1, annual NEE −241 → +14,400 g C m-2 on the demo,
    only the methods' disagreement named, where the reader refuses the same column.
    The same happened to a ``nee_flag`` of the opposite convention (1 or True for a
    good record), which rejected 99.9 % of the example's records: a flag rejecting
    more than :data:`_FLAG_REFUSE` of them is refused here, naming the convention
    (beyond half, :func:`frame_messages` warns). Our choice; towers keep about 65 %
    of their records (Falge et al. 2001 (m)), so a site whose own checks reject 95 %
    has no budget to give.

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology, 107, 43-69 (m).
    """
    for name in frame.columns:
        # the variables every stage needs; an optional one (tsoil, rh) so written is
        # left out of its stage and stays a warning of frame_messages
        if name not in REQUIRED or name in accept_units:
            continue
        values = frame[name].to_numpy(dtype=float)
        present = values[np.isfinite(values)]
        # the share rule leaves u* to the preflight, whose yearly-median rule names a wind
        # speed mapped as ustar (its gusts above 5 m s-1) by its cause
        if present.size < 48 or not (_outside(name, np.array([float(np.median(present))]))[0]
                                     or (name != "ustar"
                                         and _mostly_outside_without_a_code(name, present))):
            continue
        message = implausible_message(name, values, values, None, name, (), interval_minutes)
        if message:
            return _frame_text(message, interval_minutes)
    flag = _flag_rejects_most(frame, _FLAG_REFUSE)
    return f"frame: {flag}" if flag else None
