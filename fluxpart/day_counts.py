"""A time of day written as a count of the minutes or seconds since midnight.

Loggers write the time of day beside a date as the seconds or the minutes since midnight
("2021-06-01" and "3600" or "60" for 01:00). Such a count is told from hours and minutes
written as one number (HHMM) where some count is one no hhmm clock reads (above 2400,
or 60 to 99 past a hundred) and the median step between stamps is 30 or 60 minutes in
that unit (:func:`day_count`); read then as the clock it is, with a reader note
(:func:`as_clock`; layouts47: refused before, naming the count, layouts33 and 36).
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

#: (unit, count in a day, count in a minute): a day holds 86,400 s, 1,440 min (SI)
DAY_COUNTS = (("seconds", 86400, 60), ("minutes", 1440, 1))


def day_count(text: pd.Series, time_format: str) -> tuple | None:
    """The unit of a time field counting the seconds or minutes of the day, or None.

    Parameters
    ----------
    text : pandas.Series of str
        The stamps as written (a date, a blank, the count).
    time_format : str
        ``[input] time_format``; its time ends with ``%H%M``, ``%M`` or ``%S``.

    Returns
    -------
    tuple of (str, int, numpy.ndarray, pandas.Series, int) or None
        The unit ("seconds" or "minutes"), its count in a minute, the counts, the
        fields as written and the position of the first count no hhmm clock reads.

    References
    ----------
    A day holds 86,400 seconds, 1,440 minutes (SI; common practice); loggers write the
    time of day as seconds or minutes since midnight beside a date (common practice).
    """
    if not time_format.endswith(("%H%M", "%M", "%S")):
        return None
    last = text.str.strip().str.rsplit(n=1).str[-1]
    numbers = pd.to_numeric(last, errors="coerce").to_numpy(dtype=float)
    if numbers.size < 3 or not np.isfinite(numbers).all() \
            or (numbers != np.round(numbers)).any() or numbers.min() < 0:
        return None
    steps = np.diff(numbers)
    steps = steps[steps > 0]
    no_clock = (numbers > 2400) | (numbers % 100 >= 60)
    for unit, per_day, per_minute in DAY_COUNTS:
        if numbers.max() > per_day or (numbers % per_minute).any() or not no_clock.any() \
                or steps.size == 0 or np.median(steps) not in (30.0 * per_minute,
                                                               60.0 * per_minute):
            continue
        return unit, per_minute, numbers, last, int(np.argmax(no_clock))
    return None


def as_clock(text: pd.Series, time_format: str) -> tuple[pd.Series, str] | None:
    """The stamps with a count of the day's minutes or seconds written as the clock of
    `time_format` ("2021-06-01 90" as "2021-06-01 01:30" under "%Y-%m-%d %H:%M"; a count
    of the whole day as 24:00), and a note; None where :func:`day_count` finds none or
    the format's time is not hours and minutes (and seconds) after a blank.

    References
    ----------
    As :func:`day_count`.
    """
    found = day_count(text, time_format)
    match = re.fullmatch(r"(.*\S)\s+(%H:?%M(?::?%S)?)", time_format)
    if found is None or match is None:
        return None
    unit, per_minute, numbers, last, position = found
    seconds = numbers.astype(np.int64) % per_minute
    hours, minutes = np.divmod(numbers.astype(np.int64) // per_minute, 60)
    clock = match[2].replace("%H", "{h:02d}").replace("%M", "{m:02d}").replace(
        "%S", "{s:02d}")
    written = [clock.format(h=h, m=m, s=s) for h, m, s in zip(hours, minutes, seconds,
                                                              strict=True)]
    dates = text.str.strip().str.rsplit(n=1).str[0]
    shown = f"{last.iloc[position]!r} is {written[position]}"
    return (dates + " " + pd.Series(written, index=text.index),
            f"the time field counts the {unit} of the day ({shown}): read as that clock")
