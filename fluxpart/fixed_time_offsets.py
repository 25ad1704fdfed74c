"""NEE that departs from its neighbours at one time of day, day after day.

An analyser that is zeroed and spanned by the logger at a fixed time each day (a daily
calibration with reference gas through the cell), or a pump or valve cycle at a fixed
hour, writes records that are no flux of the ecosystem; kept as data, they add the same
offset to every day's record at that time and move the budget by the offset times the
number of days. A flux changes smoothly over the day: over a few hours its course is
rising or falling or turning, and the mean of the medians of the records just before and
just after it follows that course, so a record's departure from it
is random error, of either sign from day to day (the despiking of Papale et al. 2006
rests on the same premise). The change between night and day is a corner, not a smooth
course, and where the night's records are filtered the window holds the day's side only:
a record whose window holds both night and day departs by that corner, which follows the
sun, not the clock. Such a record is judged against the median departure of the records
at the same place beside sunrise or sunset in its quarter of the year (they were left
out until round leftovers52, which missed an offset at 05:00-07:00 and named the records
after a sunrise event with the opposite sign). The day's course between sunrise and
sunset follows the sun too (uptake follows light: the turn from the morning ramp to the
saturated plateau, or from it to the evening's fall, bends the course the same way on
every day at a clock time that moves with the season): a day record is judged against
the median departure of the day records at the same place after sunrise or before sunset
in its quarter (round fixedtime51; judged by the clock, a forest's afternoon turn was
named as a calibration). A record equal to a neighbour (NEE written in steps) is not
judged. Records of a time of day whose departures keep one sign on
most days and whose median departure stands far above that of the other times of day
were written by something that runs on the clock, or border or hold a real event of the
ecosystem at a fixed hour (an irrigation on a timer; a morning release of stored CO2
where sunrise hardly moves): the message names both causes (round review62: a 06:00
irrigation pulse of the grassland example, its own records in windows across sunrise,
named 07:30-08:30 with the opposite sign).

References
----------
Papale, D. et al. (2006). Towards a standardized processing of net ecosystem exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571-583 (despiking on the departure from neighbouring records) (m).

Aubinet, M., Vesala, T. and Papale, D. (eds.) (2012). Eddy Covariance: A Practical Guide
to Measurement and Data Analysis. Springer (analyser calibration periods removed from the
record before the flux is computed; common practice) (m).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .robust_scale import scaled_mad
from .units import flux_to_carbon

__all__ = ["STAGE", "nee_offset_at_fixed_time", "time_of_day_departures"]

STAGE = "input (nee fixed time)"
#: The centred window whose two halves' medians a record is compared with [h]: long
#: enough that a calibration's other record is a minority in each half, short enough to
#: follow the diurnal course.
WINDOW_HOURS = 4.0
#: Records each side of a record (of the window's half) needed for its departure.
MIN_SIDE_RECORDS = 2
#: A time of day is named where its median departure is at least this far from 0
#: [µmol m-2 s-1]: about a third of a night's random error (Richardson et al. 2006 (m));
#: for two records a day it moves a year's NEE by about 16 g C m-2 ...
MIN_OFFSET = 1.0
#: ... where the share of days whose departure has the median's sign lies this many
#: binomial standard errors above a half (independent errors: a half; one-sided p about
#: 3e-7 for each of 48 times of day, so that hundreds of site-years pass; all of 25 days,
#: 82 % of 60, 75 % of 100; 4 named a forest's afternoon of a trial site, 73 % of 101) ...
MIN_SIGN_Z = 5.0
#: ... and at least this many times the spread of the median departures of the times of
#: day (1.4826 MAD), which the natural turning of the diurnal course sets.
MIN_SPREAD_RATIO = 6.0
#: Times of day named at most (a calibration of 3 h at 30-min records).
MAX_TIMES = 6
#: Days with a departure that a time of day must hold to be judged.
MIN_DAYS = 20


def time_of_day_departures(nee, stamps, interval_minutes: int, is_night) -> pd.DataFrame:
    """Median departure of NEE from its neighbours by time of day.

    Parameters
    ----------
    nee : array_like
        NEE [µmol m-2 s-1] on a regular axis; NaN where missing.
    stamps : pandas.DatetimeIndex
        The records' stamps (any marking convention: only the time of day is used).
    interval_minutes : int
        Record length [min].
    is_night : array_like of bool
        Night records (the sun below the horizon): a record whose window holds both
        night and day records is judged against the records at the same place beside
        sunrise or sunset, a day record against the day records at the same place after
        sunrise or before sunset (:func:`_sun_keys`).

    Returns
    -------
    pandas.DataFrame
        Indexed by time of day (``HH:MM`` of the stamp): ``days`` (records with a
        departure), ``median`` (median departure [µmol m-2 s-1]) and ``sign_share``
        (share of the departures with the median's sign).
    """
    setting = _Setting.of(stamps, interval_minutes, is_night)
    return setting.table(np.asarray(nee, dtype=float))


#: Records of one place beside sunrise or sunset (:func:`_sun_keys`) in one quarter of the
#: year needed for their median departure, the course of the day there, to be taken out
#: (our choice: the median of 30 departures has a standard error of about a quarter of
#: one record's, so it takes out the course, not a record's noise; fewer: not judged).
MIN_KEY_RECORDS = 30


def _sun_keys(night: np.ndarray, side: int, quarter: np.ndarray) -> np.ndarray:
    """For each record whose window (`side` records each way) holds night and day: a code
    of its class (night or day), the records since its class began and until it ends
    (each up to `side` + 1), and its quarter of the year; for a day record whose window
    holds day alone: a code of its records since sunrise (before solar noon) or until
    sunset (after it) and its quarter; -1 elsewhere (night records whose window holds
    night alone, and records before the first or after the last change).

    A record beside sunrise or sunset departs from the mean of its two halves' medians by
    the corner of the diurnal course there (the flat night against the day's ramp) and by
    the night's missing records (u* filtering), which follow the sun, not the clock: the
    median departure of the records at the same place beside the change, pooled over the
    quarter's days (sunrise moves by one to three hours a quarter away from the
    solstices), is that course, and what departs from it at a fixed clock time is the
    clock's. Where sunrise hardly moves (the tropics, a solstice quarter) the two cannot
    be told apart and the place's median takes the offset with it: missed, never named
    falsely.

    The day's course between the edges follows the sun as well: uptake follows light, and
    the turn from the midday plateau to the evening (or from the morning ramp to it)
    bends the course the same way on every day, by a departure that grows with the day's
    amplitude (round fixedtime51: a forest's true NEE departed by -0.3 to -0.5 µmol m-2
    s-1 with one sign on 70-99 % of days at 14:30-16:30, and a larger amplitude crosses
    the limits). A day record is therefore judged against the records at the same place
    after sunrise or before sunset. The night's course, respiration following a slowly
    falling temperature, is nearly straight over a window of a few hours, and a night
    record away from the edges keeps its clock (a daily calibration is mostly run at
    night, where sunrise's move would spread it over several places). Under the midnight
    sun (no sunset for weeks) a day record's place is held by no other record: not
    judged.
    """
    n = night.size
    positions = np.arange(n)
    change = np.flatnonzero(night[1:] != night[:-1]) + 1
    began = np.full(n, -side - 2, dtype=np.int64)       # the record's ends: no change
    began[change] = change
    began = np.maximum.accumulate(began)
    ends = np.full(n, n + side + 2, dtype=np.int64)
    ends[change - 1] = change
    ends = np.minimum.accumulate(ends[::-1])[::-1]
    since_all, until_all = positions - began, ends - positions - 1
    since = np.minimum(since_all, side + 1)
    until = np.minimum(until_all, side + 1)
    mixed = (since < side) | (until < side)
    width = side + 2
    code = ((quarter * 2 + night) * width + since) * width + until
    # day records between the edges: the place after sunrise or before sunset, after
    # the codes of the mixed windows (8 * width**2 of them)
    known = (began >= 0) & (ends <= n)
    day_alone = ~night & ~mixed & known
    afternoon = until_all < since_all
    place = np.where(afternoon, until_all, since_all)
    day_code = 8 * width ** 2 + (quarter * 2 + afternoon) * (n + 1) + place
    return np.where(mixed, code, np.where(day_alone, day_code, -1))


class _Setting:
    """What the departures of one record need beside NEE, computed once: the window's
    half, the records' time of day (minutes) and their places beside sunrise or sunset."""

    def __init__(self, side, minutes, keys):
        self.side, self.minutes, self.keys = side, minutes, keys

    @classmethod
    def of(cls, stamps, interval_minutes, is_night):
        stamps = pd.DatetimeIndex(stamps)
        side = int(round(WINDOW_HOURS * 60 / int(interval_minutes) / 2))
        night = np.asarray(is_night, dtype=bool)
        quarter = ((stamps.month.to_numpy() - 1) // 3).astype(np.int64)
        minutes = (stamps.hour * 60 + stamps.minute).to_numpy()
        return cls(side, minutes, _sun_keys(night, side, quarter))

    def departures(self, nee: np.ndarray) -> np.ndarray:
        """Each record's departure from the mean of the medians of its window's halves
        [µmol m-2 s-1]; beside sunrise or sunset, and by day, less its place's median
        departure (:func:`_sun_keys`); NaN
        where a half holds fewer than :data:`MIN_SIDE_RECORDS` records, where the record
        equals a neighbour (NEE written in steps, a coarser flux on each record: its
        step departs with the day's ramp) or where its place holds too few records."""
        values = pd.Series(nee)
        before = values.shift(1).rolling(self.side, min_periods=MIN_SIDE_RECORDS).median()
        after = values[::-1].shift(1).rolling(self.side,
                                              min_periods=MIN_SIDE_RECORDS).median()[::-1]
        departure = (values - (before + after) / 2).to_numpy(copy=True)
        stepped = np.zeros(nee.size, dtype=bool)
        same = nee[1:] == nee[:-1]
        stepped[1:] |= same
        stepped[:-1] |= same
        departure[stepped] = np.nan
        beside = (self.keys >= 0) & np.isfinite(departure)
        if beside.any():
            frame = pd.DataFrame({"key": self.keys[beside], "departure": departure[beside]})
            grouped = frame.groupby("key")["departure"]
            course = grouped.transform("median").where(
                grouped.transform("size") >= MIN_KEY_RECORDS)
            departure[beside] = departure[beside] - course.to_numpy()
        return departure

    def table(self, nee: np.ndarray) -> pd.DataFrame:
        """:func:`time_of_day_departures`' table of `nee`."""
        departure = self.departures(nee)
        kept = np.isfinite(departure)
        frame = pd.DataFrame({"time": self.minutes[kept], "departure": departure[kept]})
        grouped = frame.groupby("time")["departure"]
        median = grouped.median()
        sign = np.sign(median)
        shares = frame.assign(same=np.sign(frame["departure"]) == sign.reindex(
            frame["time"]).to_numpy()).groupby("time")["same"].mean()
        table = pd.DataFrame({"days": grouped.size(), "median": median, "sign_share": shares})
        table.index = pd.Index([f"{m // 60:02d}:{m % 60:02d}" for m in table.index],
                               name="time")
        return table


def nee_offset_at_fixed_time(nee, stamps, interval_minutes: int, is_night,
                             columns=None) -> str | None:
    """A warning where NEE departs from its neighbours at fixed times of day.

    Parameters
    ----------
    nee : array_like
        NEE as read, the site's flag applied, before any despiking [µmol m-2 s-1];
        NaN where missing.
    stamps : pandas.DatetimeIndex
        The records' stamps (the run's: interval starts, local standard time).
    interval_minutes : int
        Record length [min].
    is_night : array_like of bool
        Night records (:func:`time_of_day_departures`).
    columns : dict, optional
        Variable name to the file's column name, for the message.

    Returns
    -------
    str or None
        The message naming the times of day, their median offset and the likely cause;
        None where no time of day stands out (:data:`MIN_OFFSET`,
        :data:`MIN_SIGN_Z`, :data:`MIN_SPREAD_RATIO`, :data:`MIN_DAYS`).

    References
    ----------
    Papale, D. et al. (2006). Biogeosciences 3, 571-583 (departure from neighbouring
    records) (m).
    """
    nee = np.asarray(nee, dtype=float)
    setting = _Setting.of(stamps, interval_minutes, is_night)
    hits, spread = [], 0.0
    for _ in range(MAX_TIMES):
        # the strongest time of day first, its records then left out: they would lift
        # the medians beside them and make their neighbours' times depart the other way
        table = setting.table(nee)
        table = table[table["days"] >= MIN_DAYS]
        if len(table) < 12:
            break
        medians = table["median"].to_numpy()
        if not hits:
            spread = scaled_mad(medians)
        sign_z = (table["sign_share"] - 0.5) * 2 * np.sqrt(table["days"])
        candidates = table[(sign_z >= MIN_SIGN_Z) & (table["median"].abs() >= max(
            MIN_OFFSET, MIN_SPREAD_RATIO * spread))]
        if candidates.empty:
            break
        strongest = candidates.loc[candidates["median"].abs().idxmax()]
        hits.append(strongest)
        hour, minute = (int(part) for part in strongest.name.split(":"))
        nee = np.where(setting.minutes == hour * 60 + minute, np.nan, nee)
    if not hits:
        return None
    hits = pd.DataFrame(hits).sort_index()
    column = (columns or {}).get("nee", "nee")
    times = ", ".join(f"{time} ({row['median']:+.2f} µmol m-2 s-1, "
                      f"{row['sign_share']:.0%} of {row['days']:.0f} days)"
                      for time, row in hits.iterrows())
    grams = float(flux_to_carbon(float(hits["median"].mul(hits["days"]).sum()),
                                 int(interval_minutes)))
    return (f"NEE (column '{column}') departs from its neighbouring records by the same sign "
            "at fixed times of day (interval starts, local standard time): "
            f"{times}, against a spread of {spread:.2f} over the other times of day, "
            f"about {grams:+.0f} g C m-2 in the records judged; a flux's random error "
            "changes sign from day to day, so something recurs at these times. Either "
            "something on the logger's clock or a timer near the tower (a daily analyser "
            "calibration or a valve or pump cycle kept as data, a generator's exhaust): "
            "then remove those records (or mark them in the flag column). Or an event of "
            "the ecosystem at a fixed hour (an irrigation on a timer, the morning release "
            "of the night's stored CO2 where sunrise hardly moves): then they are flux to "
            "keep, and a time named just after or before such an event with the opposite "
            "sign holds good records beside it (the event moves the medians they are "
            "compared with)")
