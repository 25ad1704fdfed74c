"""Stamps written as a count of time since a reference date: spreadsheet day numbers, Unix time.

``[input] time_format = "days since 1899-12-30"`` reads a spreadsheet's day numbers
(44197.020833 is 2021-01-01 00:30), ``"seconds since 1970-01-01 00:00 UTC"`` Unix time
(1609457400 is 2020-12-31 23:30 UTC). The form is the one the CF conventions give the
units of a time coordinate: a unit (days, hours, minutes, seconds, milliseconds),
``since``, a reference date with an optional time and an optional clock (``UTC``, ``Z``
or an offset ``+01:00``). A reference without a clock counts in the clock the file's
other stamps would be in (local standard time, or ``[input] time_zone``'s civil time);
one with a clock is converted to local standard time by ``[site] utc_offset``, as stamps
carrying an offset are.

The counts alone cannot tell their unit or reference (the reader refuses such a column
without this setting, naming the readings), so the setting is the user's word on them.
"""
from __future__ import annotations

import os
import re
import time
from datetime import datetime

import numpy as np
import pandas as pd

from .config import setting_text
from .errors import TimestampError

#: seconds of each unit the form names (CF conventions, section 4.4, after UDUNITS (m))
_UNIT_SECONDS = {"day": 86400.0, "hour": 3600.0, "minute": 60.0, "second": 1.0,
                 "millisecond": 1e-3}

_FORM = re.compile(
    r"\s*(?P<unit>days?|hours?|minutes?|seconds?|milliseconds?)\s+since\s+"
    r"(?P<date>\d{4}-\d{1,2}-\d{1,2})"
    r"(?:[ T](?P<time>\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?))?"
    r"\s*(?P<clock>UTC|GMT|Z|[+-]\d{1,2}(?::?\d{2})?)?\s*", re.IGNORECASE)
#: a format that means to count time since a date, well formed or not
_SINCE = re.compile(r"\s*\S+\s+since(\s|$)", re.IGNORECASE)


def counted_form(time_format: str):
    """The unit [s], reference stamp and clock of a "<unit> since <date>" format, or None.

    Parameters
    ----------
    time_format : str
        ``[input] time_format``.

    Returns
    -------
    tuple of (float, pandas.Timestamp, str or None) or None
        Seconds per counted unit, the reference stamp (naive), and the clock written
        after it as a ``+hh:mm`` offset (``"+00:00"`` for UTC, GMT and Z) or None; None
        where `time_format` is no such form (a strptime format, ``"ISO8601"``).

    Raises
    ------
    TimestampError
        The reference date or time names no instant (2021-02-30, 25:00), the clock is
        no UTC offset (beyond 14 hours, or 60 minutes or more), or the format counts
        time "since" a date but is not of the form (a unit of weeks, a date written
        30.12.1899).

    References
    ----------
    Eaton, B. et al. NetCDF Climate and Forecast (CF) Metadata Conventions, section 4.4
    "Time Coordinate": units of the form "<unit> since <reference date and time>" (m).
    UTC offsets in civil use lie from -12:00 to +14:00 (IANA time zone database (m)).
    """
    if not isinstance(time_format, str):
        return None
    match = _FORM.fullmatch(time_format)
    if match is None:
        if "%" not in time_format and _SINCE.match(time_format):
            raise TimestampError(
                f"[input] time_format = {time_format!r} cannot be used: a count of time is "
                "read as \"<unit> since <YYYY-MM-DD>[ hh:mm[:ss]][ <clock>]\" with a unit of "
                "days, hours, minutes, seconds or milliseconds and a clock of UTC, Z or "
                "an offset such as +01:00 (e.g. \"days since 1899-12-30\")")
        return None
    unit = match["unit"].lower().rstrip("s")
    written = match["date"] + (" " + match["time"] if match["time"] else "")
    try:
        reference = pd.Timestamp(written)
    except ValueError:
        raise TimestampError(
            f"[input] time_format = {time_format!r} cannot be used: {written!r} is no date "
            "and time (write the reference as YYYY-MM-DD, optionally with hh:mm)") from None
    clock = match["clock"]
    if clock is not None:
        if clock.upper() in ("UTC", "GMT", "Z"):
            clock = "+00:00"
        else:
            sign, digits = clock[0], clock[1:].replace(":", "")
            hours, minutes = (digits[:-2], digits[-2:]) if len(digits) > 2 else (digits, "00")
            if int(hours) > 14 or int(minutes) > 59:
                raise TimestampError(
                    f"[input] time_format = {time_format!r} cannot be used: {clock!r} is no "
                    "UTC offset (offsets in use lie from -12:00 to +14:00; write it as "
                    "+hh:mm)")
            clock = f"{sign}{int(hours):02d}:{minutes}"
    return _UNIT_SECONDS[unit], reference, clock


#: a whole day number and a fraction of a day written in two fields ("44197 0.020833")
_DAY_AND_FRACTION = re.compile(r"(\d+) 0?(\.\d+|)")


def day_and_fraction(text: pd.Series, time_format: str) -> tuple[pd.Series, str] | None:
    """Stamps of a whole day count and a day fraction in two columns, written as one count.

    A spreadsheet keeps a date cell and a time cell apart: saved unformatted they are the
    whole day number ("44197") and the fraction of the day ("0.020833"). Under a
    ``"days since ..."`` format and two time columns the stamp is their sum; it is
    written as one count ("44197.020833") by joining the digits (no rounding), where
    every stamp is a whole number, a blank and a fraction below 1 (a leading "0" and the
    point optional: "0" is midnight). Elsewhere None, and the stamps are judged as
    written.

    Parameters
    ----------
    text : pandas.Series of str
        The stamps as joined from the time columns (one blank between the fields).
    time_format : str
        ``[input] time_format``.

    Returns
    -------
    tuple of (pandas.Series of str, str) or None
        The stamps as one count each and a note for the reader; None where the stamps
        or the format are not of this kind.

    References
    ----------
    Spreadsheet date-times are day numbers whose fraction is the time of day (ECMA-376
    part 1, section 18.17.4 "Dates and Times" (m)); a time cell alone holds the
    fraction only (common practice).
    """
    form = counted_form(time_format)
    if form is None or form[0] != _UNIT_SECONDS["day"] or len(text) == 0:
        return None
    # anchored at both ends: str.extract searches, and "2021-06-01 0.25" or "44348.0 0.25"
    # gave the day "01" or "0" (read in 1899 without a word, review69)
    parts = text.str.strip().str.extract("^" + _DAY_AND_FRACTION.pattern + "$")
    if parts[0].isna().any():
        return None
    return parts[0] + parts[1], ("a whole day count and a fraction of the day in two columns (a "
                    "spreadsheet's date and time cells), read as their sum")


def counted_stamps(text: pd.Series, time_format: str) -> tuple[pd.Series, str, np.ndarray]:
    """Write counts of time as stamp text, with the strptime format that reads it back.

    Parameters
    ----------
    text : pandas.Series of str
        The stamp text per record: numbers counting `time_format`'s unit.
    time_format : str
        A "<unit> since <reference>" format (:func:`counted_form`).

    Returns
    -------
    stamps : pandas.Series of str
        ``YYYY-MM-DD hh:mm:ss`` (with ``+hh:mm`` where the reference carries a clock),
        rounded to the second (six decimals of a day resolve 0.09 s); a decimal comma
        is read ("44197,020833") where it cannot group thousands; a cell that is no
        finite number is kept as written, so the reader names it as a stamp that does
        not parse.
    strptime_format : str
        ``"%Y-%m-%d %H:%M:%S"``, or with ``%z`` after it.
    no_count : numpy.ndarray of bool
        The cells that are no finite number (or one beyond some 3000 years).

    References
    ----------
    Eaton, B. et al. NetCDF Climate and Forecast (CF) Metadata Conventions, section 4.4
    (m). Spreadsheets count days from 1899-12-30 (Microsoft, "Date systems in Excel":
    day 1 is 1900-01-01 and the count keeps a 29 February 1900 that never was, so from
    March 1900 on day n is 1899-12-30 + n days) or, in Excel's 1904 date system, from
    1904-01-01 (m); Unix time counts seconds since 1970-01-01 00:00 UTC (POSIX.1) (m).
    Every day is 86 400 s here, as in POSIX time and UDUNITS: no leap second is
    counted, so a count of a clock that counts them (GPS time, 18 s ahead of UTC since
    2017 (m)) is read that many seconds late.
    """
    seconds, reference, clock = counted_form(time_format)
    numbers = counts(text)
    good = np.isfinite(numbers) & (np.abs(numbers * seconds) < 1e11)  # within ~3000 years
    good &= dated(numbers, seconds, reference)
    whole = np.zeros(len(numbers), dtype="int64")
    whole[good] = np.round(numbers[good] * seconds).astype("int64")
    stamps = pd.Series(reference + pd.to_timedelta(whole, unit="s"), index=text.index)
    written = stamps.dt.strftime("%Y-%m-%d %H:%M:%S") + (clock or "")
    out = text.where(~good, written)
    return out, "%Y-%m-%d %H:%M:%S" + ("%z" if clock else ""), ~good


def counts(text: pd.Series) -> np.ndarray:
    """The number each stamp cell writes, NaN where it writes none.

    A decimal comma (a spreadsheet of a comma locale) is read where one comma stands
    before other than three digits, so that "44,197" (thousands grouped, or 44.197?)
    stays no number.
    """
    plain = text.str.strip().str.replace(r"^(-?\d+),(\d{1,2}|\d{4,})$", r"\1.\2", regex=True)
    return pd.to_numeric(plain, errors="coerce").to_numpy(dtype=float)


#: The spacing of records [s] the counts' median step must give in the format's unit:
#: from a minute (the finest records a logger averages) to a day. fluxpart reads 30- and
#: 60-minute records; a step outside this range is a unit mistaken, not a layout.
_STEP_RANGE = (60.0, 86400.0)


def unit_mismatch(text: pd.Series, time_format: str) -> str:
    """Why the counts cannot be a tower's records in `time_format`'s unit, or ''.

    Parameters
    ----------
    text : pandas.Series of str
        The stamp text per record.
    time_format : str
        A "<unit> since <reference>" format (:func:`counted_form`).

    Returns
    -------
    str
        Where the median step between successive distinct counts, in the format's
        unit, is shorter than a minute or longer than a day (:data:`_STEP_RANGE`): the
        step, the spacing it gives, and the unit in which it is 30 or 60 minutes with
        the setting that reads it (milliseconds counted as seconds put records 20.8
        days apart; Unix seconds counted as milliseconds, 1.8 s apart); '' otherwise or
        with fewer than two counts.

    References
    ----------
    The lengths of the units: CF conventions, section 4.4, after UDUNITS (m).
    """
    seconds, _, _ = counted_form(time_format)
    numbers = counts(text)
    steps = np.abs(np.diff(numbers[np.isfinite(numbers)]))
    steps = steps[steps > 0]
    if not steps.size:
        return ""
    step = float(np.median(steps))
    spacing = step * seconds
    if _STEP_RANGE[0] <= spacing <= _STEP_RANGE[1]:
        return ""
    written = _FORM.fullmatch(time_format)
    apart = f"{spacing:.3g} s" if spacing < 60 else f"{spacing / 86400:.3g} days"
    said = (f"its counts step by a median {step:g} {written['unit'].lower()}, records "
            f"{apart} apart, which is no record interval of a tower (fluxpart reads 30- and "
            "60-minute records)")
    for unit, size in _UNIT_SECONDS.items():
        minutes = step * size / 60
        if any(abs(minutes - wanted) <= 0.01 * wanted for wanted in (30, 60)):
            other = (time_format[:written.start("unit")] + unit + "s"
                     + time_format[written.end("unit"):])
            return (f"{said}; counted in {unit}s they are {minutes:.0f} minutes apart: set "
                    f"[input] time_format = {setting_text(other)} if that is their unit")
    return f"{said}: check the unit of [input] time_format"


#: A count as written: its digits after the decimal mark and its exponent, if any
#: ("44197.021", "1.609459E+12").
_WRITTEN_COUNT = re.compile(r"\s*[+-]?\d*(?:[.,](?P<decimals>\d*))?(?:[eE](?P<exponent>[+-]?\d+))?\s*")
#: The largest error [s] a stamp may carry: the reader rounds stamps within 10 s of a
#: whole minute to it (clock jitter), so a count rounded to more than twice that is
#: read on another minute.
_STAMP_TOLERANCE = 10.0
#: The half hour [s]: every record stamp fluxpart reads (30- and 60-minute records)
#: lies on its grid.
_HALF_HOUR = 1800.0
#: The hour [s]: the stamps of 60-minute records lie on its grid.
_HOUR = 3600.0


def rounded_counts(text: pd.Series, time_format: str) -> str:
    """Why counts written with too few digits cannot place a record, or ''.

    Parameters
    ----------
    text, time_format
        The stamp text per record and the "<unit> since <reference>" format, as for
        :func:`unit_mismatch`.

    Returns
    -------
    str
        Where the finest last digit any cell writes (its decimals, less its exponent)
        is more than twice :data:`_STAMP_TOLERANCE` seconds and does not divide the
        half hour (nor the hour where under a quarter of successive counts repeat:
        60-minute records in whole hours, a duplicated record aside), so that the records' stamps cannot be written (a spreadsheet's
        General format shows a 13-digit count of Unix milliseconds as
        "1.609459E+12", 1000 s; day numbers shown with three decimals are 86.4 s:
        refused before as records 33.3 minutes apart, or as a logger stamping the
        moment it writes; layouts42): a cell, the digit's size and the fix; ''
        otherwise (whole minutes, hours to one decimal, whole hours of 60-minute
        records, days to four).

    References
    ----------
    Scientific notation in spreadsheets' General number format, up to 11 characters
    (Microsoft, "Available number formats in Excel" (m)).
    """
    seconds, _, _ = counted_form(time_format)
    cells = text.str.strip()
    values = counts(text)
    numeric = np.isfinite(values)
    if not numeric.any():
        return ""
    # string methods, not a regular expression a cell: ten years of records in 0.1 s
    point = np.maximum(cells.str.find(".").to_numpy(), cells.str.find(",").to_numpy())
    decimals = np.where(point >= 0, cells.str.len().to_numpy() - point - 1, 0).astype(float)
    exponent = np.zeros(len(cells))
    written = cells.str.contains("e", case=False, regex=False).to_numpy(dtype=bool) & numeric
    if written.any():
        parts = cells[written].str.extract("^" + _WRITTEN_COUNT.pattern + "$")
        decimals[written] = parts["decimals"].fillna("").str.len().to_numpy(dtype=float)
        exponent[written] = pd.to_numeric(parts["exponent"], errors="coerce").fillna(0)
    digit = 10.0 ** (exponent - decimals)[numeric] * seconds
    finest = float(digit.min())
    if finest <= 2 * _STAMP_TOLERANCE or _divides(finest, _HALF_HOUR):
        return ""
    steps = np.diff(values[numeric])
    if _divides(finest, _HOUR) and steps.size and np.count_nonzero(steps == 0.0) < 0.25 * steps.size:
        # 60-minute records counted in whole hours (review60: refused since layouts42,
        # read before): half-hourly records rounded so repeat every second count, a file's
        # duplicated records (named by the reader as such) are few
        return ""
    first = int(np.flatnonzero(numeric)[int(np.argmin(digit))])
    shown = text.iloc[first].strip()
    notation = "in scientific notation " if "e" in shown.lower() else ""
    return (f"its counts are written {notation}to a last digit of {finest:g} s at the "
            f"finest ({shown!r}), too coarse to write a record's stamp: rounded so, the "
            "stamps cannot place the records; write the counts with more digits (in a "
            "spreadsheet, format the column as a number with enough decimals and no "
            "exponent before saving it as CSV)")


def _divides(digit: float, period: float) -> bool:
    """Whether a whole number of `digit` [s] makes `period` [s]."""
    return abs(period / digit - round(period / digit)) < 1e-9


#: The two day counts of spreadsheets: 1 January 1904 is day 1462 of the 1900 system
#: (Microsoft, "Date systems in Excel": the 1904 system's dates are 1462 days later (m)).
_DAY_SYSTEMS = {pd.Timestamp("1899-12-30"): ("1904-01-01", "Excel's 1904 date system"),
                pd.Timestamp("1904-01-01"): ("1899-12-30", "the 1900 date system of "
                                             "Excel and LibreOffice")}
#: A year written in a file name: 1971-2099 standing alone among the digits
_NAMED_YEAR = re.compile(r"(?<!\d)(19[7-9]\d|20\d\d)(?!\d)")


def day_system_mismatch(text: pd.Series, time_format: str, source: str) -> str:
    """Why spreadsheet day numbers seem to count in the other date system, or ''.

    Parameters
    ----------
    text : pandas.Series of str
        The stamp text per record: day numbers.
    time_format : str
        ``"days since 1899-12-30"`` or ``"days since 1904-01-01"`` (any other format: '').
    source : str
        The file's path or name.

    Returns
    -------
    str
        Where the file's name writes a year (1971-2099) that no stamp read under
        `time_format` falls in but one read in the other system does: the years of both
        readings, the setting of the other and how to silence it (a warning: the reader
        reads the stamps as set); '' otherwise (no year named, or the reading as set
        agrees with it).

    Notes
    -----
    Excel for Mac before 2011 counted days from 1904-01-01, so a sheet of that system
    read as days since 1899-12-30 lands 1462 days (4 years and a day) early, and the
    reverse as late (Microsoft, "Date systems in Excel" (m)); the counts alone cannot
    tell the systems apart. A year in the file name is the evidence the reader has, and
    it is weak: an export named by the year it was made (a 2021 export of 2017's
    records) names a year four years after its data. ``time_format`` is a setting the
    user writes, so a file name does not override it: the finding is a warning, never a
    refusal (leftovers50; a refusal in leftovers49).
    """
    form = counted_form(time_format)
    if form is None or form[0] != 86400.0 or form[1] not in _DAY_SYSTEMS:
        return ""
    named = {int(year) for year in _NAMED_YEAR.findall(os.path.basename(str(source)))}
    numbers = counts(text)
    numbers = numbers[np.isfinite(numbers) & (np.abs(numbers) < 1e6)]
    if not named or not numbers.size:
        return ""
    other, system = _DAY_SYSTEMS[form[1]]
    first, last = (pd.Timestamp(form[1]) + pd.Timedelta(days=float(v))
                   for v in (numbers.min(), numbers.max()))
    shift = pd.Timestamp(other) - form[1]
    years = set(range(first.year, last.year + 1))
    other_years = set(range((first + shift).year, (last + shift).year + 1))
    if named & years or not named & other_years:
        return ""
    return (f"the file name names {min(named & other_years)}, but as {time_format} the "
            f"stamps run from {first:%Y-%m-%d} to {last:%Y-%m-%d}; counted as days since "
            f"{other} ({system}) they fall in {min(named & other_years)}: if the sheet "
            f"used that system, set [input] time_format = \"days since {other}\"; read as "
            "set (the setting outweighs a file name), and where the records are of the "
            "years as read, a name that names those years (or none) silences this")


#: The date of release 0.37.0: no run of this reader is earlier, so it is the least the
#: present can be, whatever the machine's clock says (a logger PC without a clock battery
#: starts at 1970 or 2000; ``probe_faults.f_clock_far`` runs at 1970).
RELEASED = pd.Timestamp("2026-12-05")
#: How far past the present a record's median date may lie: ten years, more than any
#: logger clock is set wrong, and a test file dated in the next years still reads. The
#: known wrong references (:data:`_KNOWN_REFERENCES`) move records by 66 years or more
#: (1904 against 1970; the two spreadsheet day systems' 4 years no date bound can tell):
#: records since 1990, the first long-term ones (Wofsy et al. 1993 (m)), so misread land
#: from 2056 on, past the bound until the present reaches 2046.
FUTURE_MARGIN = pd.Timedelta(days=3653)
#: The earliest date a record's median may carry once counted: no eddy-covariance tower
#: measured CO2 fluxes before the 1970s (the first campaigns over crops, Desjardins 1974
#: (m); long-term records since 1990, Wofsy et al. 1993 (m)). Unix time read as seconds
#: since 1904-01-01 lands 66 years early (a 2021 record in 1955), days since 1970 read
#: as a spreadsheet's days 70 (review82: read without a word).
EARLIEST_RECORD = pd.Timestamp("1970-01-01")


#: whole days within pandas' ``Timestamp.min`` and ``Timestamp.max`` (nanosecond stamps)
_FIRST_STAMP = datetime(1677, 9, 22)
_LAST_STAMP = datetime(2262, 4, 11)


def dated(numbers: np.ndarray, seconds: float, reference: pd.Timestamp) -> np.ndarray:
    """Whether each count of `seconds` from `reference` dates a stamp pandas can hold.

    Stamps of nanoseconds run from 1677-09-21 to 2262-04-11 (pandas' ``Timestamp.min``
    and ``.max``); a count beyond them (day numbers counted from year 0 read as days
    since 1970) is no stamp (round layouts56: a crash before).
    """
    # in Python's datetimes: the span from a reference to either end may exceed a Timedelta
    low = (_FIRST_STAMP - reference.to_pydatetime()).total_seconds()
    high = (_LAST_STAMP - reference.to_pydatetime()).total_seconds()
    with np.errstate(invalid="ignore"):
        return np.isfinite(numbers) & (numbers * seconds > low + 1) & (numbers * seconds < high - 1)


def _date_or_year(reference: pd.Timestamp, seconds: float) -> pd.Timestamp | str:
    """`reference` plus `seconds`, or the year it falls in (text) beyond the stamps' range."""
    if dated(np.array([seconds]), 1.0, reference)[0]:
        return reference + pd.Timedelta(seconds=seconds)
    return f"{reference.year + seconds / 31_556_952:.0f}"   # mean Gregorian year [s]


def latest_record(now: float | None = None) -> pd.Timestamp:
    """The latest date a record's median may carry once counted: a tower records no
    future.

    Parameters
    ----------
    now : float, optional
        The present as Unix time [s]; the machine's clock (:func:`time.time`) where
        None.

    Returns
    -------
    pandas.Timestamp
        The later of `now` and :data:`RELEASED`, plus :data:`FUTURE_MARGIN`. The bound
        only rises with the clock, so a file read once is read on every later run; it
        replaces the fixed 2077 of release 0.38.0's drafts (review82), which let the
        66- and 70-year misreadings of records before 2011 and 2007 through (they land
        before 2077) and would have refused real records from 2077 on.

    References
    ----------
    POSIX.1, ``time()``: seconds since 1970-01-01 00:00 UTC (m).
    """
    present = pd.Timestamp(time.time() if now is None else now, unit="s")
    return max(present, RELEASED) + FUTURE_MARGIN


#: References that count the same unit, by the unit's length in seconds: a
#: spreadsheet's two day systems (Microsoft, "Date systems in Excel" (m)); Unix time
#: (POSIX.1), classic Mac OS and LabVIEW time (1904-01-01) and NTP time (1900-01-01,
#: RFC 5905) (m).
_KNOWN_REFERENCES = {86400.0: ("1899-12-30", "1904-01-01"),
                     1.0: ("1970-01-01", "1904-01-01", "1900-01-01"),
                     1e-3: ("1970-01-01",)}


def reference_mismatch(text: pd.Series, time_format: str,
                       latest: pd.Timestamp | None = None) -> str:
    """Why the counts cannot count from `time_format`'s reference date, or ''.

    Parameters
    ----------
    text : pandas.Series of str
        The stamp text per record: numbers counting `time_format`'s unit.
    time_format : str
        A "<unit> since <reference>" format (:func:`counted_form`).
    latest : pandas.Timestamp, optional
        The latest date a record may carry; :func:`latest_record` (the present and ten
        years) where None.

    Returns
    -------
    str
        Where the median count, read from the reference, dates a record after `latest`
        (a tower records no future) or before :data:`EARLIEST_RECORD` (no tower measured
        then): the dates read, and each known reference of the unit
        (:data:`_KNOWN_REFERENCES`) that places every count within the two, with the
        setting that reads it; '' otherwise (counts beyond some 3000 years are named by
        :func:`counted_stamps`' caller).

    References
    ----------
    CF conventions, section 4.4 (m); Microsoft, "Date systems in Excel" (m); POSIX.1
    (Unix time) (m); RFC 5905 (NTP time from 1900-01-01) (m).
    """
    seconds, reference, _ = counted_form(time_format)
    numbers = counts(text)
    numbers = numbers[np.isfinite(numbers) & (np.abs(numbers * seconds) < 1e11)]
    if not numbers.size:
        return ""
    latest = latest_record() if latest is None else latest
    # a count dating its records past 2262 (the last date a stamp of nanoseconds holds:
    # day numbers counted from year 0 read from 1970) is named by its year, as a count
    # beyond the stamps' range was a crash before (round layouts56)
    first, middle, last = (_date_or_year(reference, float(v) * seconds)
                           for v in (numbers.min(), np.median(numbers), numbers.max()))
    if isinstance(middle, str):
        beyond = f"the year {middle}"
        why = (f"after {latest:%Y-%m-%d}, ten years past this run's date: a tower records "
               "no future" if float(np.median(numbers)) > 0 else f"before {EARLIEST_RECORD:%Y}: "
               "no eddy-covariance tower measured then")
        return (f"counted from {reference:%Y-%m-%d} the records fall in {beyond}, {why}, so "
                "the count has another reference date or unit: check [input] time_format")
    first = first if isinstance(first, str) else f"{first:%Y-%m-%d}"
    last = last if isinstance(last, str) else f"{last:%Y-%m-%d}"
    if EARLIEST_RECORD <= middle < latest:
        # a few counts beyond them (a typo, a line of column numbers) are left to the
        # stamp checks, which name their lines
        return ""
    why = (f"after {latest:%Y-%m-%d}, ten years past this run's date: a tower records "
           "no future" if middle >= latest else f"before {EARLIEST_RECORD:%Y}: no "
           "eddy-covariance tower measured then")
    said = (f"counted from {reference:%Y-%m-%d} the records run from {first} to "
            f"{last}, {why}, so the count has another reference date")
    written = _FORM.fullmatch(time_format)
    others = []
    for other in _KNOWN_REFERENCES.get(seconds, ()):
        start = pd.Timestamp(other)
        if start == reference:
            continue
        begin = _date_or_year(start, float(numbers.min()) * seconds)
        end = _date_or_year(start, float(numbers.max()) * seconds)
        if isinstance(begin, str) or isinstance(end, str):
            continue
        if EARLIEST_RECORD <= begin and end < latest:
            setting = (time_format[:written.start("date")] + other
                       + time_format[written.end("date"):])
            others.append(f"from {other} they run from {begin:%Y-%m-%d} to {end:%Y-%m-%d} "
                          f"(time_format = {setting_text(setting)})")
    if not others:
        return f"{said}: check the reference date of [input] time_format"
    return f"{said}; " + "; ".join(others) + ": set the one the file counts from"
