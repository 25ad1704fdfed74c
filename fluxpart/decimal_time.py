"""Stamps whose last field is a decimal hour or a decimal day of the year.

Some loggers and archives write the time of day as a decimal hour beside a date column
("2021-03-05", "14.5" for 14:30), others a year and a decimal day of the year ("2021",
"64.60417" for 5 March 14:30). strptime reads neither; under a ``time_format`` whose last
field is ``%H`` (or ``%j``) such a field is rewritten here as the clock it states
(``14:30:00``, ``064 14:30:00``) and the format as ``%H:%M:%S`` (``%j %H:%M:%S``), which
the reader parses on. ``%j`` counts from 001 (1 January, 00:00 to 24:00), so 64.60417 is
the 64th day and 0.60417 of it. Some loggers count the day from 0.0 (1 January 00:00),
which read as %j puts every record a day early: :func:`day_of_year_origin` tells the two
counts apart where the values do (a value below 1, or past the last day a count from 0
reaches) and names the ambiguity where they do not (leftovers50).

A decimal number is only as precise as its last digit: 14.17 h is 14:10 or 14:10:12 or
anything within 18 s of them. A field is read as the whole minute that lies within half
its last digit's step (14.17 is 14:10:12 ± 18 s: 14:10); where no whole minute does,
it is read to the second, and the reader's rounding and drift checks judge it.
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

#: seconds of the unit each directive's decimal field counts
_UNIT_SECONDS = {"%H": 3600.0, "%j": 86400.0}
#: a last field with a decimal fraction (point or comma), or a whole number, after the
#: stamp's other fields (which end in a character that is no digit, point or comma)
_FIELD = re.compile(r"^(?P<head>(?:.*[^\d.,])?)(?P<whole>\d{1,3})(?:[.,](?P<fraction>\d+))?$")


def decimal_stamps(text: pd.Series, time_format: str, first_day: int = 1
                   ) -> tuple[pd.Series, str, int]:
    """Stamps whose last field is a decimal hour (format ending ``%H``) or day of the
    year (``%j``) rewritten as a clock, with the format that reads them.

    Parameters
    ----------
    text : pandas.Series of str
        Stamp text per record (the time columns joined by one space).
    time_format : str
        ``[input] time_format``.
    first_day : {1, 0}, optional
        The day a decimal day of the year gives 1 January: 1 as ``%j`` counts (1.0 is
        1 January 00:00), or 0 (0.0 is 1 January 00:00: each day read one later); see
        :func:`day_of_year_origin`.

    Returns
    -------
    text : pandas.Series of str
        The stamps with the decimal field written as ``HH:MM:SS`` (after ``%H``) or
        ``DDD HH:MM:SS`` (after ``%j``); `text` itself where the format ends otherwise
        or no stamp's last field holds a fraction.
    time_format : str
        The format ending ``%H:%M:%S`` (or ``%j %H:%M:%S``), or `time_format` as given.
    count : int
        Stamps rewritten (0 where none).

    Notes
    -----
    A field of ``d`` decimals states its value within half a step of 10**-d units; a
    whole minute within that is taken (14.17 h: 14:10, 0.02083 d: 00:30). 24 hours (or
    a fraction of 1 day that rounds to it) is written 24:00:00, which the reader reads
    as midnight ending the day; so is day 366.0 (367.0 in a leap year), the midnight
    ending a year written as a day past its last, as day 365 (366) 24:00:00. Cells without a fraction, blank or of another form
    are left as written (the reader names them where they fail).

    References
    ----------
    Python documentation, ``datetime.strptime``: %j is the day of the year as a
    zero-padded number, 001 to 366 (m). Taylor, J. R. (1997): An Introduction to Error
    Analysis, 2nd ed., University Science Books, section 2.2 (a value's last digit
    states its precision; common practice (m)).
    """
    directive = time_format.rstrip()[-2:]
    if directive not in _UNIT_SECONDS or not text.str.contains(r"\d[.,]\d+$").any():
        return text, time_format, 0
    parts = text.str.extract(_FIELD)
    fraction = parts["fraction"].notna().to_numpy()
    whole = pd.to_numeric(parts["whole"], errors="coerce").to_numpy(float)
    digits = parts["fraction"].fillna("").str.len().to_numpy()
    tail = pd.to_numeric("0." + parts["fraction"].fillna("0"), errors="coerce").to_numpy(float)
    unit = _UNIT_SECONDS[directive]
    # the hour (or the day's share) as seconds; a day's field keeps its whole day apart
    seconds = (whole + tail) * unit if directive == "%H" else tail * unit
    half_step = np.where(fraction, 0.5 * 10.0 ** -digits.astype(float) * unit, 0.0)
    minutes = np.round(seconds / 60.0)
    seconds = np.where(np.abs(seconds - minutes * 60.0) <= half_step + 1e-9, minutes * 60.0,
                       np.round(seconds))
    usable = np.isfinite(seconds) & parts["head"].notna().to_numpy()
    if directive == "%j":
        whole = whole + (1 - first_day)        # a count from 0: 0.5 is 1 January noon
        # the day after the year's last (366.0 of 2021, 367.0 of 2024: the midnight
        # ending the year, counted from the year its interval began) is that last
        # day's 24:00, which the reader reads as the next midnight
        closing = (whole >= 366) & (seconds == 0)
        whole = np.where(closing, whole - 1, whole)
        seconds = np.where(closing, 86400.0, seconds)
    clock = pd.Series(_clock_text(np.where(usable, seconds, 0.0)), index=text.index)
    if directive == "%H":
        written = parts["head"] + clock
    else:
        day = pd.Series([f"{int(v):03d}" if np.isfinite(v) else "" for v in whole],
                        index=text.index)
        written = parts["head"] + day + " " + clock
    count = int((usable & fraction).sum())
    if not count:
        return text, time_format, 0
    rewritten = text.where(~usable, written)
    return (rewritten, time_format.rstrip() + (":%M:%S" if directive == "%H" else " %H:%M:%S"),
            count)


def day_of_year_origin(text: pd.Series, time_format: str, day_column: str | None = None
                       ) -> tuple[int, str]:
    """Whether a decimal day of the year counts 1 January from 1 (``%j``) or from 0.

    Parameters
    ----------
    text : pandas.Series of str
        Stamp text per record (the time columns joined by one space).
    time_format : str
        ``[input] time_format``; only one ending ``%j`` over stamps with a decimal
        fraction is judged.
    day_column : str, optional
        The column holding the day alone (the last of several time columns), named in
        the settings that decide an ambiguity; None where the day shares a column.

    Returns
    -------
    first_day : {1, 0}
        0 where a value lies below 1 (day 0: only a count from 0 writes it) and none
        past the last day a count from 0 reaches (365.0 of a common year, the midnight
        ending it; 366.0 of a leap year); 1 otherwise.
    said : str
        Where the values fit both counts (none below 1, none past 365.0, or 366.0 in a
        leap year: a file that starts after 1 January and ends before the year's last
        day): the span and the reading taken (from 1, as ``%j`` counts); where they
        show a count from 0: that they were so read; '' otherwise.

    Notes
    -----
    A count from 1 writes 1 January 00:00 as 1.0 and the midnight ending a common year
    as 366.0; a count from 0 writes 0.0 and 365.0 (366.0 in a leap year). A half-hour
    grid fits both (the counts differ by a whole day), and so does a date column
    beside the stamps (the reader takes the stamps from the time columns alone). A
    year is read from the fields before the day (``%Y``, ``%y``); without one, 366.0 is
    the bound.

    References
    ----------
    Python documentation, ``datetime.strptime``: %j is the day of the year, 001 to 366
    (m); the lengths of the Gregorian years (Python's ``calendar.isleap``).
    """
    if time_format.rstrip()[-2:] != "%j" or not text.str.contains(r"\d[.,]\d+$").any():
        return 1, ""
    parts = text.str.extract(_FIELD)
    day = (pd.to_numeric(parts["whole"], errors="coerce")
           + pd.to_numeric("0." + parts["fraction"].fillna("0"), errors="coerce")
           ).to_numpy(float)
    prefix = time_format.rstrip()[:-2]
    year = (pd.to_datetime(parts["head"], format=prefix, errors="coerce").dt.year
            .to_numpy(float) if "%Y" in prefix or "%y" in prefix
            else np.full(len(text), np.nan))
    leap = (year % 4 == 0) & ((year % 100 != 0) | (year % 400 == 0))
    last = np.where(np.isfinite(year), 365.0 + leap, 366.0)
    known = np.isfinite(day)
    if not known.any():
        return 1, ""
    from_zero = bool((day[known] < 1).any())
    from_one = bool((day[known] > last[known]).any())
    low, high = float(day[known].min()), float(day[known].max())
    if from_zero and not from_one:
        return 0, (f"counts from 0 (its days run from {low:g} to {high:g}; %j counts "
                   "from 1): read as 0.0 = 1 January 00:00")
    if from_one:
        return 1, ""
    years = sorted({int(v) for v in year[np.isfinite(year)]})
    if len(years) == 1 and day_column is not None:
        settle = (f"set [input] time_column = {day_column!r} and time_format = \"days "
                  f"since {years[0]}-01-01\" if 0.0 is 1 January 00:00, or \"days since "
                  f"{years[0] - 1}-12-31\" to confirm the count from 1 (either silences "
                  "this)")
    else:
        settle = "add 1 to the day in a copy of the file if 0.0 is 1 January 00:00"
    return 1, (f"runs from day {low:g} to {high:g}, which a count from 1 (%j: 1.0 is "
               "1 January 00:00) and a count from 0 (0.0 is 1 January 00:00, every record "
               "a day later) both write: read as counted from 1; " + settle)


def _clock_text(seconds: np.ndarray) -> list:
    """``HH:MM:SS`` of seconds of a day (86 400 s: ``24:00:00``)."""
    total = seconds.astype(np.int64)
    return [f"{s // 3600:02d}:{s % 3600 // 60:02d}:{s % 60:02d}" for s in total]
