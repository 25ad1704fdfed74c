"""What stamps are, named where they do not read under ``[input] time_format``.

Pure functions used by :func:`fluxpart.timestamps.parse_stamps`. Each looks at the stamp
text (or at the stamps read) and returns the clause of a refusal that names the cause and
the fix, ``""`` (or None) where it does not apply: another common layout
(:func:`common_formats`, also read by :mod:`fluxpart.resaved_dates`), a date that cannot
be, numbers counting time, a spreadsheet's cells, months in another language, day and
month exchanged, periods instead of instants, summary lines among the records, years of
the Buddhist Era, and more. The words every stamp message shares live here too: the time
setting (``_time_setting``) and the file's line (``_where``). Nothing here raises; the
caller raises :class:`~fluxpart.errors.TimestampError` with this text.
"""

from __future__ import annotations

import re
import unicodedata
import warnings
from datetime import datetime

import numpy as np
import pandas as pd

from . import day_counts
from .config import setting_text
from .counted_time import day_and_fraction
from .month_words import MONTHS
from .stamp_formats import _date_part, _fixed_width_date, _fixed_width_layout
from .stamp_places import column_utc_offset, zone_offset

#: Most UTC offsets one clock writes: its zone's standard and summer-time offsets (the
#: time-zone database gives a zone one offset at a time and at most two within a year (m))
_CLOCK_OFFSETS_MAX = 2


def _offsets_of_a_clock(cells: pd.Series, pattern) -> bool:
    """Whether the ends of `cells` that `pattern` matches can be a clock's UTC offsets.

    A date, a hyphen and a time written as four digits ("20210601-1330") end in what
    reads as an offset (-13:30), but the time changes from record to record: an offset
    belongs to the clock and takes at most two values (standard and summer time), so
    more than two are no offsets (review35: such stamps were told to add %z, which
    reads 13:30 as the offset of midnight).

    References
    ----------
    ISO 8601-1:2019, the UTC offset of local time (m); IANA time-zone database: one
    offset at a time, standard and daylight saving time within a year (m).
    """
    found = cells.str.extract(pattern, expand=False)
    if isinstance(found, pd.DataFrame):
        found = found.iloc[:, 0]
    values = found.dropna()
    return not values.empty and values.nunique() <= _CLOCK_OFFSETS_MAX


def _where(source: str, lines: np.ndarray, position: int) -> str:
    return f"line {int(lines[position])} of {source!r}"


def _time_setting(time_columns: tuple) -> str:
    if len(time_columns) == 1:
        return f"[input] time_column {time_columns[0]!r}"
    return f"[input] time_column {list(time_columns)!r} (joined with one space)"


#: Two numeric fields written together without a character between them
_ADJACENT_FIELDS = re.compile(r"%[YmdHMS]%[mdHMS]")


def _unpadded_compact_message(text: pd.Series, time_format: str) -> tuple | None:
    """``(row, message)`` where stamps of a compact format drop a leading zero, else None.

    Under a format of numeric fields written together (``"%Y%m%d%H%M"``) a field
    written without its leading zero (month 1 for 01, hour 3 for 03) runs into the
    next: ``"2021111"`` is 1 November or 11 January, and strptime picks one reading
    per stamp by its field patterns, which may be neither the one meant nor the same
    for every stamp. Such stamps are 1 to 3 characters shorter than the format's width
    and hold only its digits and literal characters; stamps of the date alone (midnight
    written as the date, read elsewhere) have the date part's width and are left.

    References
    ----------
    ISO 8601-1:2019, basic format: every field of fixed width with leading zeros,
    since without separators only the width tells the fields apart (m).
    """
    layout = _fixed_width_layout(time_format)
    if layout is None or not _ADJACENT_FIELDS.search(time_format) or len(text) == 0:
        return None
    width = layout[2]
    raw_lengths = text.str.len().to_numpy(dtype=float, na_value=np.nan)
    if (raw_lengths == width).all():           # every stamp padded: the common case
        return None
    date_format = _date_part(time_format)
    date_width = _fixed_width_date(date_format)
    cells = text.astype("string").str.strip()
    lengths = cells.str.len().to_numpy(dtype=float, na_value=np.nan)
    literals = re.escape("".join(sorted({chr(code) for _, code in layout[1]})))
    pattern = f"[0-9{literals}]+" if literals else "[0-9]+"
    short = ((lengths >= width - 3) & (lengths < width) & (lengths != date_width)
             & cells.str.fullmatch(pattern).to_numpy(dtype=bool, na_value=False))
    if not short.any():
        return None
    first = int(np.flatnonzero(short)[0])
    return first, (f"{int(lengths[first])} characters where time_format = "
                   f"{setting_text(time_format)} writes {width} ({int(short.sum())} such "
                   "stamp(s)): a month, day, hour or minute written without its leading "
                   "zero runs into the next field, so the stamp has more than one reading "
                   "('2021111' is 1 November or 11 January); write every field with its "
                   "leading zero in a copy of the file, or separate the fields and name "
                   "them in time_format (%Y-%m-%d %H:%M reads them unpadded)")


#: Numeric clocks users export instead of dates: name, unit in seconds, epoch, plausible
#: range of values (stamps of 1971-2100), how a spreadsheet or a logger writes them.
_NUMERIC_CLOCKS = (
    ("seconds since 1970-01-01 UTC (Unix time)", 1.0, "1970-01-01", (3.2e7, 4.11e9), 0.0),
    ("milliseconds since 1970-01-01 UTC (Unix time)", 1e-3, "1970-01-01", (3.2e10, 4.11e12),
     0.0),
    ("spreadsheet day numbers (days since 1899-12-30, as Excel and LibreOffice count)",
     86400.0, "1899-12-30", (26000.0, 73051.0), 0.0),
    # MATLAB's datenum counts days from year 0 (719529 is 1970-01-01, MATLAB
    # documentation of datenum (m)); astronomers' Julian dates count days from noon UT
    # of 1 January 4713 BC (2440587.5 is 1970-01-01 00:00 UT, Meeus 1998 (m))
    ("MATLAB day numbers (datenum, days since year 0)", 86400.0, "1970-01-01",
     (700000.0, 767000.0), 719529.0),
    ("Julian dates (days since noon UTC of 1 January 4713 BC)", 86400.0, "1970-01-01",
     (2.42e6, 2.49e6), 2440587.5),
)
#: Clocks that count from 1904-01-01 in the same units as one of _NUMERIC_CLOCKS, whose
#: values fall in its range four years (days) or 66 years (seconds) off: LabVIEW's time
#: stamp and the classic Mac OS clock count seconds since 1904-01-01 (LabVIEW
#: documentation of its time stamp; Apple, Inside Macintosh (m)), and Excel's 1904 date
#: system (Excel for Mac before 2011) counts days since 1904-01-01 (Microsoft, "Date
#: systems in Excel" (m)). Named beside the first reading: the numbers cannot tell which.
_NUMERIC_CLOCKS_1904 = {
    "seconds since 1970-01-01 UTC (Unix time)":
        ("seconds since 1904-01-01 (LabVIEW, classic Mac OS)", 1.0),
    "spreadsheet day numbers (days since 1899-12-30, as Excel and LibreOffice count)":
        ("days since 1904-01-01 (Excel's 1904 date system)", 86400.0),
}


#: The [input] time_format that reads each numeric clock (:mod:`fluxpart.counted_time`);
#: MATLAB day numbers and Julian dates count from before any date it writes.
_COUNTED_FORMS = {
    "seconds since 1970-01-01 UTC (Unix time)": "seconds since 1970-01-01 UTC",
    "milliseconds since 1970-01-01 UTC (Unix time)": "milliseconds since 1970-01-01 UTC",
    "spreadsheet day numbers (days since 1899-12-30, as Excel and LibreOffice count)":
        "days since 1899-12-30",
    "seconds since 1904-01-01 (LabVIEW, classic Mac OS)": "seconds since 1904-01-01",
    "days since 1904-01-01 (Excel's 1904 date system)": "days since 1904-01-01",
}


def _other_form(other_name: str) -> str:
    return f" ({setting_text(_COUNTED_FORMS[other_name])} for the other reading)"


def _numeric_clock(text: pd.Series) -> str:
    """Name a column of plain numbers that count time (Unix time, spreadsheet days), or "".

    They are refused rather than read: Unix time is UTC while spreadsheet day numbers
    carry whatever clock the sheet had, so either needs the user's word on the zone.
    The test: every stamp a number in the clock's plausible range, and the median step
    between stamps 30 or 60 minutes in its unit.
    """
    numbers = pd.to_numeric(text.str.strip(), errors="coerce").to_numpy(dtype=float)
    if numbers.size < 3 or not np.isfinite(numbers).all():
        return ""
    step = np.median(np.diff(numbers))
    for name, seconds, epoch, (low, high), shift in _NUMERIC_CLOCKS:
        if not (low <= numbers.min() and numbers.max() <= high):
            continue
        minutes = step * seconds / 60.0
        if not any(abs(minutes - m) < 0.01 for m in (30.0, 60.0)):
            continue
        first = pd.Timestamp(epoch) + pd.Timedelta(seconds=(float(numbers[0]) - shift)
                                                   * seconds)
        zone = " UTC" if "UTC" in name else ""
        other = other_name = ""
        if name in _NUMERIC_CLOCKS_1904:
            # layouts28: LabVIEW seconds were named as Unix time of 2087, one reading only
            other_name, unit = _NUMERIC_CLOCKS_1904[name]
            then = pd.Timestamp("1904-01-01") + pd.Timedelta(seconds=float(numbers[0]) * unit)
            if 1971 <= then.year <= 2100:      # the plausible stamps of _NUMERIC_CLOCKS
                other = (f", or {other_name} (in which it is "
                         f"{then.round('min'):%Y-%m-%d %H:%M})")
        form = _COUNTED_FORMS.get(name)
        read = (f": set [input] time_format = {setting_text(form)} to read them"
                f"{_other_form(other_name) if other else ''}, or write the column"
                if form else ", which fluxpart does not read: write the column")
        return (f"the stamps are {name}, not dates ({text.iloc[0].strip()!r} is "
                f"{first.round('min'):%Y-%m-%d %H:%M}{zone}){other}{read} as dates and times "
                "in a copy of the file (e.g. 2021-06-01 "
                "13:30; in a spreadsheet, format the column as yyyy-mm-dd hh:mm before saving "
                "as CSV) and set [input] time_format to match"
                + (", with [input] time_zone = \"UTC\" if you keep UTC" if zone else ""))
    return ""


def _impossible_date(stamp: str, time_format: str) -> str:
    """Name a stamp that fits `time_format` but names a day its month lacks, or "".

    A 29 February outside a leap year or a 31 April: a logger or script that counts the
    days of the months wrongly (a leap year assumed, or 31 days in every month). Such a
    record belongs to another day, the 1 March or the 28 February, and the file cannot
    say which (layouts25: refused as a bare parse failure before).

    References
    ----------
    Gregorian calendar: February has 29 days in years divisible by 4, except century
    years not divisible by 400 (m); Python's ``datetime.strptime`` raises "day is out of
    range for month" for such dates (Python documentation (m)).
    """
    if "%" not in time_format or time_format.upper() == "ISO8601":
        return ""
    try:
        datetime.strptime(stamp.strip(), time_format)
    except ValueError as error:
        if "day is out of range for month" not in str(error):
            return ""
    else:
        return ""
    return (f"{stamp.strip()!r} names a day its month lacks (29 February outside a leap "
            "year, or the 31st of a 30-day month): a logger or script that counts the days "
            "of the months wrongly; which day the record belongs to (the day before or the "
            "day after) the file cannot say, so correct that stamp in a copy of the file")


def _serial_date_column(text: pd.Series, time_columns) -> str:
    """Name a date column of spreadsheet day numbers beside a time column ("44348 0030":
    a sheet's date cells saved as numbers), or "".

    The test: several time columns, and the first field of every joined stamp a whole
    number of days in the plausible range of :data:`_NUMERIC_CLOCKS` (1971-2100).

    References
    ----------
    Excel and LibreOffice count days from 1899-12-30 for dates after 28 February 1900
    (Excel's serial 60 is the 29 February 1900 that never was, so its day 1 is
    1900-01-01 and the count agrees with an epoch of 1899-12-30 from day 61 on;
    Microsoft documentation of the 1900 date system (m)).
    """
    if isinstance(time_columns, str) or len(time_columns) < 2:
        return ""
    first = text.str.strip().str.split(n=1).str[0]
    numbers = pd.to_numeric(first, errors="coerce").to_numpy(dtype=float)
    if numbers.size == 0 or not np.isfinite(numbers).all():
        return ""
    if (numbers != np.round(numbers)).any() or numbers.min() < 26000 or numbers.max() > 73051:
        return ""
    day = pd.Timestamp("1899-12-30") + pd.Timedelta(days=float(numbers[0]))
    said = (f"the date field {first.iloc[0]!r} is a spreadsheet day number (days since "
            f"1899-12-30, as Excel and LibreOffice count; {first.iloc[0]!r} is "
            f"{day:%Y-%m-%d})")
    if day_and_fraction(text, "days since 1899-12-30") is not None:
        # its time cell a day fraction too: the count is read (layouts48)
        return (f"{said} and the time field {text.str.strip().str.split(n=1).str[1].iloc[0]!r}"
                " a fraction of the day: set [input] time_format = \"days since 1899-12-30\" "
                "to read the two columns as one count, their sum")
    return (f"{said}, which fluxpart does not read: format the date column as "
            "yyyy-mm-dd in a copy of the file before saving it as CSV, and set [input] "
            "time_format to match")


#: Units a time field may count from midnight in: (name, per day, per minute).
def _seconds_of_day(text: pd.Series, time_format: str) -> str:
    """Name a time field that counts the seconds or the minutes of the day ("2021-06-01
    3600" or "2021-06-01 60" for 01:00; :func:`fluxpart.day_counts.day_count`), or "".

    Such stamps are read where the count is a column beside a date and the format's
    time hours and minutes (``day_counts.as_clock``, layouts47); this names the others
    (layouts33: seconds refused with no cause; layouts36: minutes).
    """
    found = day_counts.day_count(text, time_format)
    if found is None:
        return ""
    unit, per_minute, numbers, last, position = found
    hours, minutes = divmod(int(numbers[position]) // per_minute, 60)
    return (f"the time field counts the {unit} of the day ({last.iloc[position]!r} is "
            f"{hours:02d}:{minutes:02d}), not hours and minutes, which fluxpart reads "
            "only as a column of its own beside a date column under a format whose time "
            f"is %H:%M: write it so, or as hh:mm, in a copy of the file ({unit} / "
            f"{per_minute * 60} hours) and set [input] time_format to match")


def _finer_stamp(stamp: str, time_format: str) -> str:
    """A hint where `stamp` carries seconds or fractions of a second that `time_format`
    lacks ("2021-06-01 13:30:00.000" under "%Y-%m-%d %H:%M:%S", as databases and many
    loggers write them), or is an ISO 8601 ordinal date ("2021-152T13:30", year and day
    of year, ISO 8601:2004 section 4.1.2.3 (m)) under "ISO8601", which the parser behind
    that setting does not read; else ''."""
    text = stamp.strip()
    candidates = []
    if time_format.upper() == "ISO8601":
        candidates = ["%Y-%jT%H:%M", "%Y-%jT%H:%M:%S", "%Y-%j %H:%M", "%Y-%j %H:%M:%S"]
    elif time_format.endswith("%S"):
        candidates = [time_format + ".%f", time_format + ",%f"]
    elif time_format.endswith("%M"):
        candidates = [time_format + ":%S", time_format + ":%S.%f"]
    for candidate in candidates:
        try:
            datetime.strptime(text, candidate)
        except ValueError:
            continue
        what = ("an ISO 8601 ordinal date (year and day of year)"
                if "%j" in candidate and "%j" not in time_format
                else "fractions of a second" if candidate.endswith("%f")
                else "seconds")
        return f"the stamps carry {what}: set time_format = {setting_text(candidate)}"
    return ""


def _mixed_forms(hint: str, text: pd.Series, failed: np.ndarray, skipped: np.ndarray,
                 time_format: str, source: str, lines: np.ndarray) -> str:
    """`hint`, or where it proposes another time_format that the stamps read so far do
    not match, a hint naming the file's two forms of stamp.

    A logger program or export changed the stamps' form within a file (seconds added,
    a two-digit year, AM/PM): the format proposed for the failing stamps would fail
    the others, and one time_format reads every stamp of every file. `skipped`: the
    failing stamps and those read in another way (hour 24, a date alone).
    """
    proposed = re.search(r'time_format = "((?:[^"\\]|\\.)*)"', hint)
    if proposed is None or skipped.all() or time_format.upper() == "ISO8601":
        return hint
    candidate = proposed.group(1).replace('\\"', '"').replace("\\\\", "\\")
    passed = np.flatnonzero(~skipped)
    sample = passed[np.linspace(0, len(passed) - 1, min(len(passed), 25)).astype(int)]
    for row in sample:
        try:
            datetime.strptime(text.iloc[row].strip(), candidate)
        except ValueError:
            first = int(np.flatnonzero(failed)[0])
            return (f"; the file writes its stamps in two forms ({text.iloc[row]!r} on "
                    f"line {int(lines[row])}, {text.iloc[first]!r} from line "
                    f"{int(lines[first])}), and time_format = "
                    f"{setting_text(candidate)} would read only the second: one time_format "
                    "reads every stamp, so write them in one form in a copy of the file")
    return hint


#: what a spreadsheet writes beside a date or a time that it saves as a date and time:
#: the midnight of a date cell (24-hour and 12-hour forms), and the day zero of a time
#: cell, 1899-12-30 in the orders a sheet's locale writes it
_CELL_MIDNIGHTS = ("00:00:00", "00:00", "0:00:00", "0:00", "12:00:00 AM", "12:00 AM")
_CELL_DAY_ZEROS = ("1899-12-30", "1899/12/30", "30.12.1899", "30/12/1899", "12/30/1899")


def _spreadsheet_cell_time(failed: pd.Series, time_columns, time_format: str) -> str:
    """Name a date column whose cells carry a midnight time, or a time column whose cells
    carry the spreadsheet's day zero, with the time_format that reads past it; else "".

    A sheet that holds the date and the time in two columns saves a date cell formatted
    with a time as "2021-06-01 00:00:00" and a time cell formatted with a date as
    "1899-12-30 13:30:00", so the joined stamp ("2021-06-01 00:00:00 13:30:00") holds
    two times (or two dates) and matches no format of one date and one time. The test:
    several time columns, a format of a date, a space and a time (:func:`_date_part`),
    and every failed stamp read by that format with one of :data:`_CELL_MIDNIGHTS` or
    :data:`_CELL_DAY_ZEROS` written between its date and its time as literal text, which
    strptime matches as it is.

    Parameters
    ----------
    failed : pandas.Series of str
        The joined stamps that fail to parse.
    time_columns : str or tuple of str
        The [input] time_column setting.
    time_format : str
        The [input] time_format setting.

    Returns
    -------
    str
        The hint naming the column, the text it carries and the time_format to write.

    References
    ----------
    Excel and LibreOffice keep a date as a day number whose time of day is its fraction,
    so a date cell holds midnight and a time cell holds day 0, which is 1899-12-30
    (Microsoft documentation of the 1900 date system (m)).
    """
    if isinstance(time_columns, str) or len(time_columns) < 2 or not len(failed):
        return ""
    date = _date_part(time_format)
    if date is None or not time_format[len(date):].startswith(" "):
        return ""
    rest = time_format[len(date):]
    texts = failed.str.strip()
    for literal in _CELL_MIDNIGHTS + _CELL_DAY_ZEROS:
        candidate = f"{date} {literal}{rest}"
        if pd.to_datetime(texts, format=candidate, errors="coerce").notna().all():
            if literal in _CELL_MIDNIGHTS:
                what = (f"the date column {time_columns[0]!r} holds the time {literal!r} "
                        "after each date (a spreadsheet's date cells saved as date and time)")
            else:
                what = (f"the time column {time_columns[-1]!r} holds the date {literal!r} "
                        "before each time (a spreadsheet's time cells saved as date and "
                        "time: its day zero)")
            return (f"{what}: write time_format = {setting_text(candidate)}, which reads "
                    "past it as literal text")
    return ""


def _written_where_it_changes(text: pd.Series, failed: np.ndarray, time_columns) -> str:
    """A hint where the first of several time columns is empty on every failing line and
    holds each of its values once on the others: a date written only on the first record
    of each day (a sheet whose repeated dates were merged or blanked), else ''.

    References
    ----------
    Common practice: spreadsheets show a repeated value once per group (merged cells, a
    report layout), and a sheet saved as CSV leaves the other cells empty.
    """
    if isinstance(time_columns, str) or len(time_columns) < 2 or failed.all():
        return ""
    first_empty = text.str.match(r"\s").to_numpy()
    if not first_empty[failed].all() or first_empty[~failed].any():
        return ""
    written = text[~failed].str.split().str[0]
    if written.duplicated().any():
        return ""
    return (f"column {time_columns[0]!r} is empty on {int(failed.sum())} of {len(text)} "
            "lines and holds each of its values once on the others: it is written only "
            "where it changes (a sheet's repeated cells merged or left blank), so these "
            "records have no date: write it on every line in a copy of the file")


#: A UTC offset after a stamp, alone or after UTC or GMT, in brackets or not ("
#: (UTC+01:00)", " GMT+0100", " [+01:00]"; ISO 8601-1:2019 writes offsets as
#: +hh:mm or +hhmm (m))
_OFFSET_TAIL = re.compile(r"\s*[(\[]?\s*(?:UTC|GMT)?\s*(?P<offset>[+-]\d{2}:?\d{2})\s*[)\]]?\s*$")


#: Stamp layouts common in logger files and spreadsheet exports, as strptime formats:
#: ISO 8601's date order with a space or a T, slashes, day-first with dots, slashes or
#: dashes, US month-first, and the compact digits (common practice; not the compact form
#: with seconds, whose 12-digit stamps strptime also reads with one-digit minutes and seconds)
_COMMON_FORMATS = (
    "%Y-%m-%d %H:%M", "%Y-%m-%d %H:%M:%S", "%Y-%m-%dT%H:%M", "%Y-%m-%dT%H:%M:%S",
    "%Y/%m/%d %H:%M", "%Y/%m/%d %H:%M:%S", "%d.%m.%Y %H:%M", "%d.%m.%Y %H:%M:%S",
    "%d/%m/%Y %H:%M", "%d/%m/%Y %H:%M:%S", "%m/%d/%Y %H:%M", "%m/%d/%Y %H:%M:%S",
    "%d-%m-%Y %H:%M", "%d-%m-%Y %H:%M:%S", "%Y%m%d%H%M",
)


#: Stamps :func:`common_formats` tries each layout on before the whole column.
_HEAD_STAMPS = 200


def _common_format(text: pd.Series, time_format: str) -> str:
    """A hint naming the one common layout every stamp reads under, else ''.

    A time_format written for another file (day-first dots for ISO stamps) got no hint
    at all where no rule above names the difference (review39). Only a layout under
    which every stamp of the column parses, and no other of the list does, is named:
    stamps that read both day-first and month-first (every day at most 12) get none.
    """
    fitting = common_formats(text, time_format)
    if len(fitting) != 1:
        return ""
    return f"every stamp reads as time_format = {setting_text(fitting[0])}"


def _untailed_common_format(untailed: pd.Series, text: pd.Series, time_format: str) -> str:
    """:func:`_common_format` of the stamps as written, else without a zero fraction of a
    second ("00:30:00.000" as "00:30:00"), else as read past a zero tail (`text`).

    The stamps as written are tried first, so that the format named is the file's own
    (newuser57); a fraction of zeros, which no common layout writes, was then left with
    no hint where it had one before (review95: "2021-06-01 00:30:00.000" under
    "%Y%m%d%H%M"), so the stamp without it, then the text read past its zero tail, are
    tried next: each format so named reads every stamp (:func:`zero_tails`).
    """
    found = _common_format(untailed, time_format)
    if found:
        return found
    seconds = untailed.astype(str).str.replace(r"(:\d\d)[.,]0+(\s*)$", r"\1\2",
                                                regex=True).where(untailed.notna())
    if not seconds.equals(untailed):
        found = _common_format(seconds, time_format)
    if not found and not text.equals(untailed):
        found = _common_format(text, time_format)
    return found


def common_formats(text: pd.Series, time_format: str) -> list:
    """The layouts of :data:`_COMMON_FORMATS` but `time_format` under which every stamp
    of `text` (blank cells aside) parses; none where there is no stamp."""
    stamps = text.dropna().astype(str).str.strip()
    stamps = stamps[stamps != ""]
    if not len(stamps):
        return []
    fitting = []
    # a layout that fails one of the first stamps fails the column: tried on them first,
    # the whole column is parsed only under the layouts they fit (review95: 13 s for a
    # ten-year 10-minute file under a format of another file, now under 1 s)
    head = stamps.iloc[:_HEAD_STAMPS]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for candidate in _COMMON_FORMATS:
            if candidate == time_format:
                continue
            if pd.to_datetime(head, format=candidate, errors="coerce").isna().any():
                continue
            read = pd.to_datetime(stamps, format=candidate, errors="coerce")
            if read.notna().all():
                fitting.append(candidate)
    return fitting


def _text_around_stamps(text: pd.Series, failed: np.ndarray, time_format: str) -> str:
    """A hint where every stamp carries the same text before or after it that the format
    lacks ("'" of a spreadsheet's text cell, " Uhr", " h") or writes the ISO 8601 "T"
    between date and time where the format has a space, and the format with it reads
    every stamp; else ''. A clock after the stamps ("UTC", "CET") is no such text:
    written into the format as text it would be read as local standard time.

    References
    ----------
    Python documentation, ``time.strftime``: characters of a format other than
    directives match themselves, "%%" a percent sign (m). ISO 8601-1:2019 (the "T"
    between date and time) (m).
    """
    cells = text.str.strip()
    cells = cells[cells != ""]
    if cells.empty or time_format.upper() == "ISO8601":
        return ""
    stamp = cells.iloc[0]
    prefix = re.match(r"[^0-9A-Za-z]*", stamp).group(0)
    suffix = re.search(r"[^0-9]*$", stamp).group(0)
    candidates = []
    if prefix and cells.str.startswith(prefix).all():
        candidates.append((f"the stamps begin with {prefix!r}",
                           prefix.replace("%", "%%") + time_format))
    if suffix.strip() and cells.str.endswith(suffix).all() \
            and column_utc_offset(suffix) is None and zone_offset(suffix) is None \
            and not re.search(r"(?i)[ap]\.?m\.?|[+-]", suffix):
        candidates.append((f"the stamps end in {suffix!r}",
                           time_format + suffix.replace("%", "%%")))
    if " " in time_format and "T" in stamp:
        candidates.append(("the stamps write 'T' (ISO 8601) between date and time",
                           time_format.replace(" ", "T", 1)))
    for mark in ("-", "_"):
        # review35: "20210601-1330", a date and a time joined by a hyphen or an underscore
        if " " in time_format and mark in stamp:
            candidates.append((f"the stamps write {mark!r} between date and time",
                               time_format.replace(" ", mark, 1)))
    offset = _OFFSET_TAIL.search(stamp)
    if offset and "%z" not in time_format and _offsets_of_a_clock(cells, _OFFSET_TAIL):
        # layouts28: a UTC offset after each stamp in words or brackets (" (UTC+01:00)")
        # was refused with no cause; %z reads it, each stamp by its own offset
        tail = offset.group(0)
        digits = offset.group("offset")
        candidates.append((f"the stamps end in {tail!r}, a UTC offset",
                           time_format + tail.replace("%", "%%").replace(digits, "%z")))
    for what, candidate in candidates:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            read = pd.to_datetime(cells, format=candidate, errors="coerce",
                                  utc="%z" in candidate)
        if read.notna().all():
            return (f"{what}, which time_format lacks: time_format = "
                    f"{setting_text(candidate)} reads every stamp")
    return ""


def _marked_stamps(text: pd.Series, failed: np.ndarray, time_format: str) -> str:
    """A hint where the stamps that fail are the others' form with a mark after them
    ("02:30*", "02:30 B", "02:30 (2)") that the format reads without it; else ''.

    A logger or an export marks some records so: the second pass of the hour that
    clocks repeat when daylight saving ends, or records edited by hand. The mark is
    named, not dropped: what it means the file does not say (layouts28: refused as a
    bare parse failure).

    References
    ----------
    Python documentation, ``datetime.strptime``: the whole string must match the
    format (m).
    """
    if failed.all() or not failed.any() or time_format.upper() == "ISO8601":
        return ""
    cells = text[failed].str.strip()
    marks = cells.str.extract(r"(\s*(?:[*#!?+]+|\(\d+\)|\[\d+\]|[A-Za-z]))$", expand=False)
    if marks.isna().any():
        return ""
    bare = pd.Series([cell[:len(cell) - len(mark)] for cell, mark in
                      zip(cells, marks, strict=True)], index=cells.index)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        read = pd.to_datetime(bare, format=time_format, errors="coerce")
    if read.isna().any():
        return ""
    shown = ", ".join(repr(mark.strip()) for mark in dict.fromkeys(marks))
    return (f"{int(failed.sum())} stamp(s) end in a mark the other stamps lack ({shown}; "
            f"{cells.iloc[0]!r}): a mark of the hour that clocks repeat when daylight "
            "saving ends, or of records edited by hand? What it means the file does not "
            "say: remove the mark in a copy of the file (with [input] time_zone, the "
            "repeated hour is read in record order, its first pass summer time)")


#: A format ending in hours and minutes written as a decimal number ("%H.%M", "%H,%M")
_DECIMAL_CLOCK = re.compile(r"%H([.,])%M$")


def _minutes_of_one_digit(text: pd.Series, time_format: str) -> tuple | None:
    """(row, message tail) where a format ending in %H.%M reads a minute field of one
    digit ("0.3", "13.3"), else None.

    Such a field is no logger's minute: it is hours and minutes saved as a number, the
    minutes' trailing zero dropped ("0.30" saved as 0.3 is 00:30), or decimal hours
    (0.3 h is 00:18); strptime reads it as 3 minutes (00:03). The two readings differ,
    so the file is refused naming both, not read with steps of 3 and 57 minutes.

    References
    ----------
    Python documentation, ``datetime.strptime``: %M accepts one digit (m). IEEE 754 /
    common practice: a number saved without its trailing zeros (0.30 -> 0.3).
    """
    match = _DECIMAL_CLOCK.search(time_format.strip())
    if match is None:
        return None
    mark = re.escape(match.group(1))
    short = text.str.strip().str.contains(rf"(?<![\d.,])\d{{1,2}}{mark}\d$", regex=True)
    short = short.fillna(False).to_numpy(dtype=bool)
    if not short.any():
        return None
    row = int(np.flatnonzero(short)[0])
    clock = re.search(rf"(\d{{1,2}}){mark}(\d)$", text.iloc[row].strip())
    hours, tenth = int(clock.group(1)), int(clock.group(2))
    decimal = hours * 60 + tenth * 6
    return row, (f", whose minutes have one digit ({int(short.sum())} such stamp(s)), "
                 f"which %M reads as {hours:02d}:{tenth:02d}: hours and minutes saved as a "
                 f"number without the minutes' trailing zero read {hours:02d}:{tenth}0, "
                 f"decimal hours {decimal // 60:02d}:{decimal % 60:02d}; write the times "
                 "with two-digit minutes (or as HH:MM) in a copy of the file")


def _other_format(stamp: str, time_format: str) -> str:
    """A hint where a stamp fails only for a 12-hour clock, a two-digit year or seconds
    written in one of stamp and format but not the other, else ''."""
    def parses(candidate):
        try:
            datetime.strptime(stamp.strip(), candidate)
        except ValueError:
            return False
        return True
    if "%p" not in time_format and re.search(r"(?i)\b[AP]\.?M\.?$", stamp.strip()):
        wanted = time_format.replace("%H", "%I") + " %p"
        return ("the stamps carry AM/PM (a 12-hour clock): write the hour as %I and add %p"
                + (f", time_format = {setting_text(wanted)}" if parses(wanted) else ""))
    if "%Y" in time_format and parses(time_format.replace("%Y", "%y")):
        return ("the year has two digits: write it as %y, time_format = "
                f"{setting_text(time_format.replace('%Y', '%y'))}")
    # seconds in the format but not in the stamps, or the other way round
    if ":%S" in time_format and parses(time_format.replace(":%S", "", 1)):
        return ("the stamps have no seconds: time_format = "
                f"{setting_text(time_format.replace(':%S', '', 1))}")
    if "%H:%M" in time_format and "%S" not in time_format \
            and parses(time_format.replace("%H:%M", "%H:%M:%S", 1)):
        return ("the stamps carry seconds: time_format = "
                f"{setting_text(time_format.replace('%H:%M', '%H:%M:%S', 1))}")
    separated = _other_separators(stamp, time_format)
    if separated and parses(separated):
        # layouts33: "2021/01/01 00:30" under "%Y-%m-%d %H:%M" was refused with no hint
        return ("the stamps separate their fields with other characters than time_format "
                f"does: time_format = {setting_text(separated)}")
    return ""


_FORMAT_CODE = re.compile(r"%[A-Za-z]")
#: A separator between two fields of a stamp: a run of characters other than letters
#: and digits, or ISO 8601's "T" between date and time (left to _text_around_stamps,
#: which checks every stamp)
_STAMP_SEPARATOR = re.compile(r"(?<=\d)T(?=\d)|[^0-9A-Za-z]+")


def _other_separators(stamp: str, time_format: str) -> str:
    """`time_format` with its separators replaced by the stamp's, in order, else ''.

    Only for a format whose codes are each separated by literal characters (none
    before the first or after the last), and a stamp with as many separators, some of
    them others than the format's ("2021/01/01 00:30" under "%Y-%m-%d %H:%M").

    References
    ----------
    ISO 8601-1:2019 writes dates with "-", times with ":" and "T" between them;
    spreadsheets and loggers use "/", "." and a blank as well (common practice).
    """
    codes = _FORMAT_CODE.findall(time_format)
    pieces = _FORMAT_CODE.split(time_format)
    inner = pieces[1:-1]
    if len(codes) < 2 or pieces[0] or pieces[-1] or not all(inner):
        return ""
    found = _STAMP_SEPARATOR.findall(stamp.strip())
    if len(found) != len(inner) or found == inner or "T" in found:
        return ""                  # ISO's "T" alone is named by _text_around_stamps
    return "".join(code + separator for code, separator in zip(codes, found + [""],
                                                                  strict=True))


_ENGLISH_MONTHS = ("jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct",
                   "nov", "dec")


def _foreign_month(stamp: str) -> str:
    """A word of letters in `stamp` that starts no English month name and is no month
    word :mod:`fluxpart.month_words` reads, or ''."""
    for word in re.findall(r"[^\W\d_]{3,}", stamp):
        if word[:3].lower() not in _ENGLISH_MONTHS and word.upper() not in (
                "AM", "PM", "UTC", "GMT") and unicodedata.normalize(
                    "NFC", word.lower()) not in MONTHS:     # those are read (layouts44)
            return word
    return ""


def _swapped_day_month(failed: pd.Series, time_format: str,
                       passed: pd.Series | None = None) -> str:
    """A hint where every stamp parses with %d and %m exchanged, else ''.

    Stamps of month-first dates (06/13/2021) read under a day-first format parse up to
    the 12th of each month, as the wrong dates, and fail from the 13th on; the stamps
    that `passed` then parse with the exchanged format too (day and month both at most
    12). A day-first file with one damaged stamp ("2021-13-01" among "2021-01-13") has
    stamps that parse only as they are, and gets no hint.
    """
    if "%d" not in time_format or "%m" not in time_format:
        return ""
    swapped = (time_format.replace("%d", "\0").replace("%m", "%d").replace("\0", "%m"))
    # utc=True: zone labels under %Z ("CET" read as the zone with summer time on the
    # exchanged dates) give stamps of several offsets, which pandas refuses to mix
    if passed is not None and len(passed) and pd.to_datetime(
            passed, format=swapped, errors="coerce", utc=True).isna().any():
        return ""
    if pd.to_datetime(failed, format=swapped, errors="coerce", utc=True).notna().all():
        return ("the day and the month are exchanged (the stamps that parse up to there "
                "were read as wrong dates): write time_format = "
                f"{setting_text(swapped)}")
    return ""


def _exchanged_spread(text: pd.Series, parsed: pd.Series, plain: np.ndarray,
                      time_format: str, utc: bool) -> str:
    """A message where every stamp parses both as written and with %d and %m exchanged,
    and the stamps as written spread over four times the time they cover exchanged.

    A record of the first 11 days of a month written month-first (06/01 ... 06/11)
    parses under a day-first format as the 6th of eleven months: no stamp fails, so
    :func:`_swapped_day_month` never speaks, and the record becomes eleven days spread
    over eleven months with 97 % of its stamps inserted as missing. Read the other way
    the same stamps are a short record; a record is written in one calendar order, and a
    true day-first record of days 1 to 12 read exchanged spreads instead, so it passes.
    Else ''.
    """
    if "%d" not in time_format or "%m" not in time_format or plain.sum() < 2:
        return ""
    kept = pd.DatetimeIndex(parsed[plain])
    if kept.day.max() > 12:
        return ""
    swapped = time_format.replace("%d", "\0").replace("%m", "%d").replace("\0", "%m")
    other = pd.to_datetime(text[plain], format=swapped, errors="coerce", utc=utc)
    if other.isna().any():
        return ""
    spread = kept.max() - kept.min()
    other_spread = other.max() - other.min()
    if spread <= pd.Timedelta(days=20) or other_spread * 4 > spread:
        return ""
    return (f"parse both day-first and month-first: read as time_format = "
            f"{setting_text(time_format)} they spread over {spread.days} days, read with "
            f"the day and the month exchanged they are {other_spread / pd.Timedelta(days=1):.1f} "
            f"days of records: write time_format = {setting_text(swapped)}")


#: A clock time of a period's start, a dash (hyphen or en dash) or "to", and its end
#: ("14:00-14:30", "14:00 - 14:30", "14:00 to 14:30") closing a stamp.
_PERIOD = re.compile(r".*?(\d{1,2}:\d{2}(?::\d{2})?)\s*(?:[-\u2013]|\bto\b)\s*"
                     r"(\d{1,2}:\d{2}(?::\d{2})?)\s*")


def _period_stamps(failed: pd.Series) -> str:
    """The cause and fix where every stamp that fails writes a period, its start and
    end times ("2021-03-05 14:00-14:30": some portals' and spreadsheets' layout), or "".

    strptime reads one time of a field; which end is the record's stamp is the user's
    word (``time_marks``), and the date written beside a period is its start's (the
    period 23:30-00:00 ends on the next day), so the fix keeps the start (layouts42).
    Every period must last as long, up to 3 hours (a record's length): a clock and its
    UTC offset ("14:30:00-01:00") lasts no one length.
    """
    if not len(failed):
        return ""
    times = failed.str.extract(_PERIOD.pattern + "$")
    if times.isna().any(axis=None):
        return ""

    def minutes(clocks):
        parts = clocks.str.split(":", expand=True)
        return parts[0].astype(int) * 60 + parts[1].astype(int)

    lengths = ((minutes(times[1]) - minutes(times[0])) % 1440).unique()
    if len(lengths) != 1 or not 0 < lengths[0] <= 180:
        return ""
    start, end = times.iloc[0]
    return (f"the stamps write a period, its start and end ({start!r} to {end!r}), and "
            "time_format reads one time: in a copy of the file keep the date and the "
            "start time (cut the column at the dash) and set [input] time_marks = "
            "\"start\" (the date beside a period is its start's: the end of 23:30-00:00 "
            "falls on the next day)")


def _fraction_hint(failed: pd.Series, time_format: str) -> str:
    """A hint where stamps that fail hold numbers with a decimal fraction (a decimal day
    of year or hour; integers saved from a table of floating-point numbers), else ''."""
    if "." in time_format or time_format.upper() == "ISO8601":
        return ""
    if failed.str.fullmatch(r"\s*[+-]?\d+(?:[.,]\d+)?[eE][+-]?\d+\s*").all():
        # a spreadsheet showing yyyymmddhhmm numbers in scientific notation saves them so
        return (f"the stamps are numbers in scientific notation ({failed.iloc[0].strip()!r}), "
                "as a spreadsheet saves a column of numbers such as 202106011330 it shows "
                "rounded: their day, hour and minute digits are lost; export the column again "
                "formatted as text (or as dates and times, e.g. 2021-06-01 13:30) and set "
                "time_format to match")
    if failed.str.fullmatch(r"\s*[0-5]?\d:[0-5]\d[.,]\d+\s*").all():
        # a spreadsheet opening stamps with fractions of seconds formats the cells as
        # minutes, seconds and tenths and saves them so (common practice, layouts31):
        # "30:00.0" is the minute and second of 00:30:00.000 of any hour and day
        return (f"the stamps are minutes, seconds and tenths ({failed.iloc[0].strip()!r}), "
                "as a spreadsheet shows and saves date-times it formatted as mm:ss.0: "
                "their date and hour are lost; export the column again formatted as dates "
                "and times (e.g. yyyy-mm-dd hh:mm) and set time_format to match")
    fractions = failed.str.extractall(r"(?<![\d.])\d+\.(\d+)(?![\d.])")
    if fractions.empty:
        return ""
    if fractions[0].str.fullmatch("0+").all():
        return ("the time fields are whole numbers written with a decimal fraction ("
                f"{failed.iloc[0].strip()!r}, as a table of floating-point numbers is saved): "
                "write them as integers in a copy of the file")
    last = pd.to_numeric(failed.str.strip().str.rsplit(n=1).str[-1], errors="coerce")
    if len(failed) > 1 and last.notna().all() and (last >= 0).all() and (last < 1).all() \
            and failed.str.strip().str.contains(r"\s").all():
        # a sheet keeps a time of day as the fraction of a day (13:30 is 0.5625) and
        # saves a time cell formatted as a number so (Microsoft documentation of the
        # 1900 date system (m))
        return (f"the time field ({failed.iloc[0].strip().rsplit(None, 1)[-1]!r}) is a "
                "fraction of a day (0.5625 is 13:30), as a spreadsheet saves a time cell "
                "formatted as a number: format the time column as hh:mm in a copy of the file "
                "before saving it as CSV, and set time_format to match")
    return ("the stamps hold decimal fractions (a decimal day of year or hour?): a year and "
            "a decimal day of the year are read under a time_format ending in %j (\"%Y %j\", "
            "1.0 for 1 January 00:00), a date and a decimal hour under one ending in %H "
            "(\"%Y-%m-%d %H\"), the decimal field last; else write the column as dates and "
            "times in a copy of the file (e.g. 2021-06-01 13:30) and set time_format to match")


#: Years of the Buddhist Era as the Thai solar calendar counts them: the Gregorian year
#: + 543 (the calendar of Thailand since 1941, which Thai-locale spreadsheets and
#: Windows write in dates (m)). Stamps whose years all lie in the Buddhist Era's years
#: of 1900-2200 CE are over 400 years ahead read as written, which no measured or
#: simulated site-year is (our bound).
_BUDDHIST_ERA_OFFSET = 543
_BUDDHIST_ERA_YEARS = (1900 + 543, 2200 + 543)


def _buddhist_era(index: pd.DatetimeIndex) -> str:
    """Name stamps dated in the Buddhist Era's years (2564 for 2021), or "".

    Read as written they were the year 2564 (a leap year: 29 February a day-long gap)
    without a word (layouts28); the file cannot say the calendar, so both readings are
    named and the stamps are refused.

    References
    ----------
    Thai solar calendar: Buddhist Era year = Gregorian year + 543 (m).
    """
    if index.empty or index.hasnans:
        return ""
    low, high = int(index.year.min()), int(index.year.max())
    if not (_BUDDHIST_ERA_YEARS[0] <= low and high <= _BUDDHIST_ERA_YEARS[1]):
        return ""
    first = low - _BUDDHIST_ERA_OFFSET
    last = high - _BUDDHIST_ERA_OFFSET
    years = f"{low}" if low == high else f"{low} to {high}"
    gregorian = f"{first}" if first == last else f"{first} to {last}"
    return (f"are dated {years}, over 400 years ahead; in the Buddhist Era of the Thai "
            f"solar calendar (Gregorian year + 543, as a Thai-locale spreadsheet writes "
            f"dates) they are {gregorian}: write Gregorian years in a copy of the file "
            "(format the column with the Gregorian calendar before saving)")


def _summary_lines(text: pd.Series, failed: np.ndarray) -> str:
    """Name stamps that fail at a fixed spacing among stamps that parse (a daily summary
    line after every 48 half-hourly records: "2021-06-01" or "daily total" in the stamp
    column), or a last line stamped with the start of the records' dates ("2021-01" after
    "2021-01-31 23:30": a month's summary), or "".

    The test: three or more failed stamps, most of the steps between them the same
    (two records or more), and most stamps parsed. Such lines are refused rather than
    dropped (layouts45: refused before with no cause): a stamp of a date alone may be
    a record's, and the lines' count and spacing are the user's to confirm.

    References
    ----------
    Loggers and spreadsheets write a day's means or totals under its records (common
    practice).
    """
    at = np.flatnonzero(failed)
    if at.size == 1 and at[0] == len(text) - 1 and len(text) > 2:
        # the last line's stamp the start of most records' dates ("2021-01" under
        # "2021-01-31 23:30"): a summary of the month or the day closing the file
        last = str(text.iloc[-1]).strip()
        others = text.iloc[:-1].astype(str).str.strip()
        if len(last) >= 4 and (others.str.startswith(last)
                               & (others.str.len() > len(last))).mean() > 0.5:
            return (f"the last line's stamp {last!r} is the start of the records' dates: a "
                    "summary line of the period (its means or totals?) closing the file; "
                    "remove it in a copy of the file")
    if at.size < 3 or at.size > 0.2 * len(text):
        return ""
    steps = np.diff(at)
    values, counts = np.unique(steps, return_counts=True)
    step = int(values[np.argmax(counts)])
    if step < 3 or counts.max() < 0.9 * steps.size:
        return ""
    shown = ", ".join(repr(v) for v in text.iloc[at[:2]])
    return (f"the {at.size} stamps that fail come one after every {step - 1} records "
            f"({shown}, ...): summary lines (a day's means or totals?) among the records; "
            "remove them in a copy of the file")
