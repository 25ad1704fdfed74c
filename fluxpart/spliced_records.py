"""Records of another file spliced into the record (round mistakes44).

A stretch of another tower's (or another year's) records pasted into a site's file, to
fill an outage or by a slip of a spreadsheet, passes every range, clock and sign check
where the other tower stands at a similar latitude: its sun, its units and its signs are
right. Its fluxes, though, are another ecosystem's (on the invented grassland example a
July of an invented maize field pasted in moved annual NEE by -217 g C m-2, 24 sigma,
without a word). Where the pasted records carry their own weather, the joint shows: the
soil temperature, which heat conduction keeps from changing fast, steps at one record far
beyond any change of the rest of the record (ten times its largest), and the air temperature steps at that same
record too. A thunderstorm over a hot soil can do this once, so two such joints are
needed.

References
----------
Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
2nd ed. Springer, ch. 8 (heat conduction in soil: the daily wave damped as exp(-z/d), d
about 0.1 m) (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["STAGE", "FILE_STAGE", "SOIL_STEP_FACTOR", "FILE_STEP_FACTOR", "file_joint",
           "spliced_records"]

#: The stage named in the preflight finding.
STAGE = "input (spliced records)"

#: The stage named where a lone joint falls on a file boundary (round mistakes51): what is
#: seen and where, not its cause (another tower's file, or the probe replaced there; review66).
FILE_STAGE = "input (soil step where files meet)"

#: Quantile of the soil temperature's record-to-record changes taken as its own largest
#: change [1]: the 99.9th percentile, beyond the few records of storms of a year.
_TAIL = 99.9
#: Quantile of the air temperature's changes its step at a joint reaches [1]: the 99th
#: percentile, the top 1 % (a soil that steps alone, a probe replaced or a stuck sensor
#: coming back, coincides with a change that large once in a hundred).
_AIR_TAIL = 99.0
#: Factor by which a soil temperature's step at a joint exceeds the record's own largest
#: changes (its :data:`_TAIL` percentile) [1]. Our choice, an order of magnitude: heat
#: conduction damps and delays any change at the surface on its way down (Campbell &
#: Norman 1998, ch. 8 (m)), so a soil's largest changes, a storm's rain on a hot surface,
#: form a tail of similar steps, while another site's or year's soil differs by its whole
#: weather. Measured (``tests/benchmarks/bench_spliced_records.py``): the largest step of
#: 68 generated site-years and the ten-year demo is 1.1-1.3 times the tail; a trial whose
#: weather generator joins its days at midnight (trial seventeenth) steps its soil up to
#: 8.4 times (named at 3 times in 3 of its site configs); the next site-year's July pasted
#: is named in 41 of 68 (49 at 3 times; the rest with a joint in a gap or the air alike).
SOIL_STEP_FACTOR = 10.0
#: Factor by which a soil temperature's step at the first record of a calendar month
#: exceeds the record's own largest changes (its :data:`_TAIL` percentile) to name a lone
#: joint there [1] (round mistakes51). Our choice, half of :data:`SOIL_STEP_FACTOR`: the
#: place is fixed in advance, midnight before a month's first day, where monthly or yearly
#: files meet (24 of the 17520 pairs of a half-hourly year, a month's first record by its start or by its end), so a storm or a probe's
#: service would have to fall on that one record by chance, while a lone joint anywhere
#: else is left to storms. Measured (``tests/benchmarks/bench_spliced_records.py``): the
#: largest step of the generated site-years anywhere is 1.1-1.3 times the tail (a margin
#: of four); another tower's file joined at 1 September (its overlap dropped) steps the
#: grassland example's soil 7.4 times.
FILE_STEP_FACTOR = 5.0
#: Factor by which a file joint's soil step exceeds the largest step at the same clock
#: time on any other day [1] (round mistakes51). Our choice: a joint is the one step of
#: its size at its time of day, while a record whose soil steps at that time on other days
#: by half as much or more shows its clock (trial soils of daily means stepped 4-6 K at
#: many midnights, one on 1 April, and 2.8 K beside a 4.6 K step at a new year).
_CLOCK_FACTOR = 2.0
#: Smallest soil step at a joint [K]. Our choice: a deep probe's changes are a few
#: hundredths of a K, so a reading's noise of a few tenths would stand 10 times beyond them;
#: another site's or year's soil differs from this one's by K.
_MIN_SOIL_STEP = 1.0
#: Fewest joints that name the record [1]: a pasted stretch inside the record has two,
#: a storm gives one.
_MIN_JOINTS = 2
#: Longest stretch between two joints that makes them one pasted stretch [days]. Our
#: choice, half a year and a fortnight: a stretch pasted to fill an outage, or another
#: year's growing season of up to six months (184 days), is bounded by two joints at
#: most that far apart, while two lone steps a year or more apart are two unrelated
#: events, a season's event recurring (a trial's subarctic soil stepped 8.1 K at the
#: start of its snow model and 1.9 K 22 months later, 659 days: named before round
#: lead49; another trial's soil steps 356 days apart). 92 days in rounds lead49 to
#: leftovers49, which left a pasted season of 4-6 months unnamed. Measured
#: (``tests/benchmarks/bench_spliced_records.py``, round leftovers50): the next
#: site-year's April-August pasted named in 39 of 68 (0 at 92 days), July alone in 41
#: of 68 as before; the generated sets and the demo records have no joint at all, and
#: of 102 site configs of trials 6-22 four have a lone joint and two a pair, 356 and
#: 659 days apart, none named.
_MAX_STRETCH_DAYS = 200.0
#: Fewest pairs of consecutive records with both temperatures present for the tail to
#: be judged [1]: 30 days of half-hours (our choice).
_MIN_PAIRS = 1440


def _bounding_a_stretch(joints, index, size) -> np.ndarray:
    """The joints with another joint at most :data:`_MAX_STRETCH_DAYS` away.

    Parameters
    ----------
    joints : numpy.ndarray of int
        Record positions of the joints, ascending.
    index : pandas.DatetimeIndex or None
        Interval starts of the records; None keeps every joint (no time to measure).
    size : int
        Number of records.

    Returns
    -------
    numpy.ndarray of int
        The joints that, with a neighbour, bound a stretch of half a year or so at most.
    """
    if joints.size < 2 or index is None or len(index) != size:
        return joints
    days = (pd.DatetimeIndex(index)[joints] - pd.DatetimeIndex(index)[joints[0]]) \
        / pd.Timedelta(days=1)
    days = np.asarray(days, dtype=float)
    gaps = np.diff(days)
    near = np.zeros(joints.size, dtype=bool)
    near[:-1] |= gaps <= _MAX_STRETCH_DAYS
    near[1:] |= gaps <= _MAX_STRETCH_DAYS
    return joints[near]


def spliced_records(tair, tsoil, index=None, names=None) -> str | None:
    """A message naming joints where both temperatures step beyond the record's own, or None.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [degC], NaN where missing, consecutive
        records.
    index : pandas.DatetimeIndex, optional
        Interval starts, to name the joints.
    names : dict, optional
        Canonical name -> file column, to name the columns.

    Returns
    -------
    str or None
        The warning text; None where fewer than two records (:data:`_MIN_JOINTS`) see the
        soil temperature change from the previous record by more than
        :data:`SOIL_STEP_FACTOR` times the 99.9th percentile of its changes (and by more
        than 1 K) and the air temperature, at the same record, by its 99th percentile or
        more (two such records in a row, one record stepping out and back, count as
        none; with `index`, only joints within 200 days of another count: the two ends
        of one pasted stretch, half a year or so at most); or where fewer than 1440 pairs of
        consecutive records hold both temperatures.

    Notes
    -----
    Only changes between consecutive records, both present, count: a gap lets any
    temperature change. A soil temperature of exactly 0 on either side is left to the
    check of zeros written for missing values (``column_faults.zero_coded_temperature``).
    A stuck sensor that comes back steps as well, but in its own column alone. A single
    record of both temperatures off and back (a logger's glitch) is no joint either.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    air = np.asarray(tair, dtype=float)
    soil = np.asarray(tsoil, dtype=float)
    if air.size < 2 or air.shape != soil.shape:
        return None
    air_step = np.abs(np.diff(air))
    soil_step = np.abs(np.diff(soil))
    with np.errstate(invalid="ignore"):
        pairs = (np.isfinite(air_step) & np.isfinite(soil_step)
                 & (soil[1:] != 0) & (soil[:-1] != 0))
    if pairs.sum() < _MIN_PAIRS:
        return None
    air_tail = np.percentile(air_step[pairs], _AIR_TAIL)
    soil_tail = np.percentile(soil_step[pairs], _TAIL)
    joints = np.flatnonzero(pairs & (soil_step > max(SOIL_STEP_FACTOR * soil_tail,
                                                     _MIN_SOIL_STEP))
                            & (air_step >= air_tail)) + 1
    # a step out and back at consecutive records is one record's excursion, a logger's
    # glitch that both sensors read (a power dip), not a stretch of another file: a
    # single pasted record is indistinguishable from it and carries one record's flux
    # (review55: a one-record +8 K glitch of both was named as two joints)
    joints = joints[~(np.isin(joints, joints + 1) | np.isin(joints, joints - 1))]
    joints = _bounding_a_stretch(joints, index, air.size)
    if joints.size < _MIN_JOINTS:
        return None
    names = names or {}
    if index is not None and len(index) == air.size:
        stamps = pd.DatetimeIndex(index)
        where = ", ".join(f"{stamps[j]:%Y-%m-%d %H:%M} (tsoil {soil_step[j - 1]:.1f} K, "
                          f"tair {air_step[j - 1]:.1f} K)"
                          for j in joints[:4])
    else:
        where = ", ".join(f"record {j}" for j in joints[:4])
    more = f" and {joints.size - 4} more" if joints.size > 4 else ""
    return (f"soil temperature (column {names.get('tsoil', 'tsoil')!r}) and air temperature "
            f"(column {names.get('tair', 'tair')!r}) step together at {joints.size} records "
            f"({where}{more}): the soil by more than {SOIL_STEP_FACTOR:g} times its largest "
            f"changes elsewhere ({soil_tail:.2f} K, the 99.9th percentile), the air by its "
            f"largest ({air_tail:.2f} K); heat conduction lets no soil jump so, so records of "
            "another file (another tower's or year's, pasted to fill an outage) join the "
            "record there, and their fluxes would enter as this site's (a storm's rain on "
            "a hot, bare soil steps both too, once: check those dates' weather); check the "
            "file between these stamps and mark pasted records missing in a copy")


def _month_midnight(stamps: pd.DatetimeIndex) -> np.ndarray:
    """Whether each stamp is midnight before a month's first day."""
    return np.asarray((stamps == stamps.normalize()) & (stamps.day == 1))


def _alone_at_its_clock(step, stamps, joint) -> bool:
    """Whether the soil's step into record `joint` exceeds :data:`_CLOCK_FACTOR` times its
    largest step into a record of the same clock time on any other day.

    A soil that steps at that time on other days too (daily values written into each
    record, a model's or a logger's day boundary, a freezing soil's steps to and from 0)
    shows the clock's pattern, not a joint of files.
    """
    clock = stamps[1:].hour * 60 + stamps[1:].minute
    same = np.isfinite(step) & (clock == clock[joint - 1])
    same[joint - 1] = False
    if not same.any():
        return False
    return bool(step[joint - 1] > _CLOCK_FACTOR * step[same].max())


def file_joint(tsoil, index, names=None) -> str | None:
    """A message naming a lone soil step where two files meet, or None (round mistakes51).

    Two towers' (or two years') files joined with their overlap of stamps dropped leave
    one joint, at the first record of the later file: its soil temperature, which heat
    conduction keeps from changing fast, steps there from one tower's to the other's.
    Files are split by month or year, so the joint falls at a record that starts or ends
    at midnight before a month's first day (files cut by the stamps' date, stamps marking
    either end of the interval). A soil step there of more than :data:`FILE_STEP_FACTOR`
    times the record's own largest changes (the 99.9th percentile), more than 1 K and more
    than twice its largest step at the same clock time on any other day names it; the air need not step (another tower's air at the same hour is often alike).
    A soil probe replaced or recalibrated at that record steps the same way and is named
    too, as the other cause to rule out (the record cannot tell the two apart).

    Parameters
    ----------
    tsoil : array_like
        Soil temperature of each record [degC], NaN where missing, consecutive records.
    index : pandas.DatetimeIndex
        Interval starts of the records, evenly spaced.
    names : dict, optional
        Canonical name -> file column, to name the column.

    Returns
    -------
    str or None
        The warning text; None where no month's first record steps so (a step taken
        back by half or more at the next record, a logger's glitch, is none), where the index does
        not match, or where fewer than 1440 pairs of consecutive records hold the soil
        temperature.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    soil = np.asarray(tsoil, dtype=float)
    if soil.size < 3 or index is None or len(index) != soil.size:
        return None
    stamps = pd.DatetimeIndex(index)
    change = np.diff(soil)
    step = np.abs(change)
    with np.errstate(invalid="ignore"):
        pairs = np.isfinite(step) & (soil[1:] != 0) & (soil[:-1] != 0)
    if pairs.sum() < _MIN_PAIRS:
        return None
    tail = np.percentile(step[pairs], _TAIL)
    # a file's first record as cut by the date of its stamp: its start or its end at
    # midnight before a month's first day (stamps marking either)
    interval = (stamps[1:] - stamps[:-1]).median()
    month_start = _month_midnight(stamps[1:]) | _month_midnight(stamps[1:] + interval)
    # a step taken back by half or more at the next record is a logger's glitch
    back = -np.r_[change[1:], np.nan] / np.where(change == 0, np.nan, change)
    with np.errstate(invalid="ignore"):
        big = pairs & (step > max(FILE_STEP_FACTOR * tail, _MIN_SOIL_STEP))
        joints = np.flatnonzero(month_start & big & ~(back >= 0.5)) + 1
    joints = np.array([j for j in joints if _alone_at_its_clock(step, stamps, j)],
                      dtype=int)
    if joints.size == 0:
        return None
    name = (names or {}).get("tsoil", "tsoil")
    where = ", ".join(f"the record {stamps[j]:%Y-%m-%d %H:%M}-{stamps[j] + interval:%H:%M}, "
                      f"{soil[j - 1]:.1f} -> {soil[j]:.1f} degC" for j in joints[:4])
    return (f"soil temperature (column {name!r}) steps at the first record of a month "
            f"({where}) by more than {FILE_STEP_FACTOR:g} times its largest changes "
            f"elsewhere ({tail:.2f} K, the 99.9th percentile), where files split by month "
            "or year meet: heat conduction lets no soil jump so, so the records from there "
            "on likely come from another file (another tower's, or another year's, joined "
            "with its overlap of stamps dropped), and their fluxes would enter as this "
            "site's; compare the stamps and the site of the files you joined. If the site's "
            "log shows the soil probe replaced or recalibrated there, the fluxes are this "
            "site's and the soil temperature alone steps: correct or mark it missing on one "
            "side in a copy")
