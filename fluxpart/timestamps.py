"""Turn the stamp text of tower files into interval starts in local standard time.

Pure functions used by :mod:`fluxpart.io`: parse stamps (one column or several
joined by one space, hour ``24:00``, stamps carrying a UTC offset, civil time
with daylight saving in a named zone) into :class:`ParsedStamps`. A stamp that does
not parse raises a :class:`~fluxpart.errors.TimestampError` naming the setting, the
file and the line, with the cause :mod:`fluxpart.stamp_hints` finds. Time zones are
read by :mod:`fluxpart.time_zones`; the order and spacing of the stamps read are
checked by :mod:`fluxpart.stamp_sequence`; budget years are
:mod:`fluxpart.budget_calendar`'s.

Time convention of the result (DESIGN.md §3): tz-naive stamps in the site's
local standard time (UTC + ``utc_offset``, no daylight saving).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import datetime

import numpy as np
import pandas as pd

from .config import setting_text
from .counted_time import (
    counted_form,
    counted_stamps,
    counts,
    day_and_fraction,
    day_system_mismatch,
    reference_mismatch,
    rounded_counts,
    unit_mismatch,
)
from .decimal_time import day_of_year_origin, decimal_stamps
from .errors import TimestampError
from .month_words import english_months
from .reader_notes import ReaderNote
from .stamp_formats import _FIXED_FIELDS, _date_part, _fixed_width_layout
from .stamp_hints import (
    _buddhist_era,
    _exchanged_spread,
    _finer_stamp,
    _foreign_month,
    _fraction_hint,
    _impossible_date,
    _marked_stamps,
    _minutes_of_one_digit,
    _mixed_forms,
    _numeric_clock,
    _offsets_of_a_clock,
    _other_format,
    _period_stamps,
    _seconds_of_day,
    _serial_date_column,
    _spreadsheet_cell_time,
    _summary_lines,
    _swapped_day_month,
    _text_around_stamps,
    _time_setting,
    _unpadded_compact_message,
    _untailed_common_format,
    _where,
    _written_where_it_changes,
)
from .stamp_places import ends_in_utc_z
from .time_zones import _UTC_NAMES, _civil_to_standard, _standard_time_labels
from .zero_seconds import zero_tails
from .zone_suffixes import zone_suffixes

__all__ = [
    "ParsedStamps",
    "join_time_columns",
    "offsets_in_stamps",
    "parse_stamps",
]

_OFFSET_AT_END = re.compile(r"(?:(?<![A-Za-z])Z|[+-]\d{2}:?\d{2})$")   # not "MEZ"
_OFFSET_AT_END_GROUP = re.compile(r"((?<![A-Za-z])Z|[+-]\d{2}:?\d{2})$")


#: A stamp cell that holds no date: empty, a negative number or one of at most five
#: digits (a missing code such as -9999 in the time column)
_NO_DATE = re.compile(r"\s*(?:-\d+(?:[.,]\d*)?|\+?\d{1,5}(?:[.,]\d*)?)?\s*")
#: A database's zero date ("0000-00-00 00:00:00"), MySQL's stand-in for no date (MySQL
#: reference manual, "The DATE, DATETIME, and TIMESTAMP Types" (m)).
_ZERO_DATE = re.compile(r"\s*0{2,4}[-./]00?[-./]0{2,4}(?!\d)")
#: Words for no value written in a time column: SQL's NULL and its dump form \N (MySQL
#: and PostgreSQL text exports (m)), NaN/NaT/NA/None of numerical and statistics
#: programs, #N/A of spreadsheets (common practice).
NULL_STAMP = re.compile(r"(?i)\s*(?:null|\\n|none|nan|nat|na|n/a|#n/a|<na>)\s*")
_HOUR_24 = (
    (re.compile(r"(?<!\d)24:00(:00)?(?!\d)"), lambda m: "00:00" + (m[1] or "")),
    (re.compile(r"(?<!\d)24(00)$"), lambda m: "00" + m[1]),
    (re.compile(r"(?<=T)24(?!\d)"), lambda m: "00"),
    (re.compile(r"(?<!\d)24h00(?!\d)"), lambda m: "00h00"),
)


@dataclass(frozen=True)
class ParsedStamps:
    """Stamps of one file in local standard time, and what it took to get them.

    Attributes
    ----------
    stamps : pandas.DatetimeIndex
        tz-naive stamps in the site's local standard time, in file order (stamps as
        written, before the shift to interval starts).
    hour_24 : int
        Stamps written with hour 24 and read as midnight of the next day.
    offset_converted : int
        Stamps that carried a UTC offset and were converted.
    daylight_saving : int
        Stamps read as daylight-saving civil time and moved back to standard time.
    utc_zone : int
        Stamps read in a UTC zone (``[input] time_zone = "UTC"``, a logger kept on UTC)
        and moved to the site's local standard time (0 at a site of UTC+0).
    rounded_to_minute : int
        Stamps a few seconds off a whole minute (logger clock jitter, or a
        "minus one second" end stamp) rounded to it.
    date_only : int
        Stamps written as the date alone among stamps with a time of day, read as
        midnight (how R's ``as.character`` and some spreadsheet exports write 00:00).
    whole_numbers : int
        Stamps whose numeric fields were written as whole numbers with a decimal point
        ("2021.0 1.0 30.0" for year, day of year and hhmm) and read without it.
    decimal_fields : int
        Stamps whose last field is a decimal hour or day of the year ("14.5" under a
        format ending %H, "64.60417" under %j), read as the clock it states.
    notes : tuple of str
        What the reader is to warn of: evidence against the setting too weak to refuse
        it (a file name's year against spreadsheet day numbers' date system; a decimal
        day of the year that may count from 0).
    """

    stamps: pd.DatetimeIndex
    hour_24: int = 0
    offset_converted: int = 0
    daylight_saving: int = 0
    utc_zone: int = 0
    rounded_to_minute: int = 0
    date_only: int = 0
    whole_numbers: int = 0
    decimal_fields: int = 0
    notes: tuple = ()


def join_time_columns(raw: pd.DataFrame, time_columns: tuple) -> pd.Series:
    """Return the stamp text: the time columns' cells joined by one space, stripped."""
    text = raw[time_columns[0]].astype(str).str.strip()
    for column in time_columns[1:]:
        text = text + " " + raw[column].astype(str).str.strip()
    return text


def _whole_number_fields(text: pd.Series, time_format: str) -> tuple[pd.Series, int]:
    """Stamp fields written as whole numbers with a decimal point, read without it.

    A program that keeps a column holding an empty cell as floating point writes its
    whole numbers as "2021.0", "1.0", "30.0" (year, day of year, hhmm). A field (a
    blank-separated position of the stamp text) is rewritten only where every stamp has
    it and every one of its cells is digits, a point and zeros, and only under a
    time_format without a point of its own ("%H.%M" reads 13.00 as 13:00).

    Returns
    -------
    text : pandas.Series of str
        The stamps with such fields' points and zeros removed.
    count : int
        Stamps rewritten (0 where none).

    References
    ----------
    pandas writes an integer column holding a missing value as float64, each whole
    number with ".0" (pandas documentation, "Nullable integer data type" (m)).
    """
    if "." in time_format or not text.str.contains(".", regex=False).any():
        return text, 0
    parts = text.str.split(expand=True)
    if parts.empty or parts.isna().any().any():
        return text, 0
    floats = [c for c in parts.columns if parts[c].str.fullmatch(r"\d+\.0+").all()]
    if not floats:
        return text, 0
    for column in floats:
        parts[column] = parts[column].str.replace(r"\.0+$", "", regex=True)
    joined = parts[parts.columns[0]].str.cat([parts[c] for c in parts.columns[1:]], sep=" ")
    return joined, len(text)


def _to_datetime(text: pd.Series, time_format: str, utc: bool) -> pd.Series:
    if not utc:
        fixed = _fixed_width_stamps(text, time_format)
        if fixed is not None:
            return fixed
    try:
        return pd.to_datetime(text, format=time_format, errors="coerce", utc=utc)
    except (ValueError, TypeError, re.error) as error:
        repeated = sorted({code for code in re.findall(r"%([A-Za-z])", time_format)
                           if time_format.count(f"%{code}") > 1})
        if repeated:
            months = " (%m is the month, %M the minute)" if {"m", "M"} & set(repeated) else ""
            raise TimestampError(
                f"[input] time_format = {setting_text(time_format)} cannot be used: it repeats "
                f"{', '.join('%' + code for code in repeated)}; each field may appear once"
                f"{months}") from None
        hint = ""
        if "%s" in time_format:
            # layouts42: the hint said to rewrite the column, where a count of time
            # since a date (the CF conventions' form) reads Unix time as written
            hint = ("; for Unix time (seconds since 1970-01-01 UTC) write time_format = "
                    "\"seconds since 1970-01-01 UTC\" (\"milliseconds since ...\" for "
                    "milliseconds)")
        raise TimestampError(f"[input] time_format = {setting_text(time_format)} cannot be used: "
                             f"{' '.join(str(error).split())}{hint}") from None


def _fixed_width_stamps(text: pd.Series, time_format: str) -> pd.Series | None:
    """Stamps of a fixed-width numeric format read by array arithmetic, or None.

    The fast path of :func:`_to_datetime` (strptime on 17,520 stamps takes ~0.1 s):
    taken only where every stamp has exactly the format's width, its literal
    characters in place, ASCII digits in every field, and every field in range
    (the day within its month). Such a stamp has one reading, the one strptime
    gives (its field patterns try two digits first), so the values are those of
    :func:`pandas.to_datetime`; any other column returns None and takes that path,
    with its messages, hour 24 and padding rules.
    """
    layout = _fixed_width_layout(time_format)
    if layout is None or len(text) == 0:
        return None
    fields, literals, width = layout
    import pyarrow as pa

    try:
        cells = pa.array(text, from_pandas=True)
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return None
    if isinstance(cells, pa.ChunkedArray):
        cells = cells.combine_chunks()
    if cells.null_count or not (pa.types.is_string(cells.type)
                                or pa.types.is_large_string(cells.type)):
        return None
    cells = cells.cast(pa.large_binary())
    offsets = np.frombuffer(cells.buffers()[1], dtype=np.int64)[
        cells.offset:cells.offset + len(cells) + 1]
    if not (np.diff(offsets) == width).all():
        return None
    data = np.frombuffer(cells.buffers()[2], dtype=np.uint8)[offsets[0]:offsets[-1]]
    data = data.reshape(len(cells), width)
    for position, code in literals:
        if not (data[:, position] == code).all():
            return None
    values = {}
    for code, start in fields.items():
        digits = data[:, start:start + _FIXED_FIELDS[code][0]].astype(np.int64) - ord("0")
        if ((digits < 0) | (digits > 9)).any():
            return None
        number = np.zeros(len(data), dtype=np.int64)
        for column in digits.T:
            number = number * 10 + column
        low, high = _FIXED_FIELDS[code][1:]
        if ((number < low) | (number > high)).any():
            return None
        values[code] = number
    month = (values["Y"] - 1970) * 12 + values["m"] - 1
    first_day = month.astype("datetime64[M]").astype("datetime64[D]")
    next_first = (month + 1).astype("datetime64[M]").astype("datetime64[D]")
    if (values["d"] > (next_first - first_day).astype(np.int64)).any():
        return None
    seconds = values["H"] * 3600 + values["M"] * 60 + values.get("S", 0)
    stamps = (first_day + (values["d"] - 1)).astype("datetime64[s]") + seconds
    # the unit pandas gives parsed text (microseconds in pandas 3), from its own first stamp
    probe = pd.to_datetime(text.iloc[:1], format=time_format, errors="coerce")
    if probe.isna().any() or probe.iloc[0] != stamps[0]:
        return None
    return pd.Series(stamps.astype(probe.dtype), index=text.index, name=text.name)


_CLOCK_FIELD = re.compile(r"%H%M(%S)?")


def _hour_only_offsets(text: pd.Series) -> pd.Series:
    """Stamps ending in a UTC offset of hours alone (``+01``, ``-05``) with its minutes
    (``+0100``), for a format ending in ``%z``.

    ISO 8601 allows an offset of hours alone (``±hh``, ISO 8601:2004, 4.2.5.1 (m)) and
    database exports write it (``2021-06-01 13:30:00+02``); pandas' ``%z`` reads it
    after seconds but not after minutes or a space, so such a file was refused or read
    by its format's accident. A stamp under a format ending in ``%z`` ends in its offset,
    so the two digits after the sign are hours. An offset written after "UTC" or "GMT"
    ("UTC+1", "GMT-05:00", as some loggers and system clocks label their zone) is that
    offset (layouts44).
    """
    text = text.str.replace(_NAMED_OFFSET, lambda m: (
        f"{m.group(1)}{int(m.group(2)):02d}{m.group(3) or '00'}"), regex=True)
    return text.str.replace(r"([+-]\d{2})$", r"\g<1>00", regex=True)


#: an offset after the letters of UTC or GMT at a stamp's end ("UTC+1", "GMT-05:00")
_NAMED_OFFSET = re.compile(r"(?:UTC|GMT)\s?([+-])(\d{1,2})(?::?(\d{2}))?$")


def _pad_clock_fields(text: pd.Series, time_format: str) -> pd.Series:
    """Zero-pad clock fields written as integers (``30`` for ``0030`` under ``%H%M``).

    Loggers often write the time of day as an integer hhmm in a column of its own
    (``30``, ``130``, ``2400``). strptime reads the digits of ``%H%M`` greedily, so
    ``130`` would become 13:00, not 01:30. Where the format, split at single spaces,
    has a field that is exactly ``%H%M`` (or ``%H%M%S``) and every stamp splits into
    as many fields, such a field of 1 to 3 (5) digits is padded with leading zeros
    to 4 (6) digits. Other stamps are returned unchanged.
    """
    fields = time_format.split(" ")
    clock = [i for i, field in enumerate(fields) if _CLOCK_FIELD.fullmatch(field)]
    if not clock or len(text) == 0:
        return text
    parts = text.str.split(" ", expand=True, regex=False)
    if parts.shape[1] != len(fields) or parts.isna().to_numpy().any():
        return text
    padded = False
    for i in clock:
        width = 6 if fields[i].endswith("%S") else 4
        short = parts[i].str.fullmatch(r"\d{1,%d}" % (width - 1)).to_numpy(bool)
        if short.any():
            parts[i] = parts[i].str.zfill(width)
            padded = True
    if not padded:
        return text
    joined = parts[0]
    for i in range(1, len(fields)):
        joined = joined + " " + parts[i]
    return joined


#: Largest distance of a stamp from a whole minute that is read as clock jitter and
#: rounded [s]; our choice: loggers write end stamps one second early (23:59:59) or
#: drift by seconds, while a stamp further off is no 30- or 60-minute record.
JITTER_SECONDS = 10.0


def _round_to_minute(index: pd.DatetimeIndex) -> tuple[pd.DatetimeIndex, int]:
    """Round stamps to the whole minute where every stamp is within JITTER_SECONDS of one."""
    if len(index) == 0:
        return index, 0
    rounded = index.round("min")
    off = np.abs(np.asarray((index - rounded) / pd.Timedelta(seconds=1), dtype=float))
    moved = int(np.count_nonzero(off > 0))
    if moved == 0 or np.nanmax(off) > JITTER_SECONDS:
        return index, 0
    return rounded, moved


def _carries_offset(text: pd.Series, time_format: str) -> bool:
    if "%z" in time_format or "%Z" in time_format:
        return True
    if time_format.upper() == "ISO8601":
        return bool(text.str.contains(_OFFSET_AT_END).any())
    return False


#: a UTC offset or the Z of UTC after a time of day ("13:30Z", "133000z", "13:30:00+02",
#: "1330+0200"); a date alone ("2021-06-01") ends in no offset
_OFFSET_AFTER_TIME = re.compile(
    r"(?:\d[zZ]|\d{2}:?\d{2}(?::?\d{2}(?:[.,]\d+)?)?\s*[+-]\d{2}(?::?\d{2})?)\s*$")


def offsets_in_stamps(text: pd.Series) -> bool:
    """Whether any stamp ends in a UTC offset or the Z of UTC (read under
    ``time_format = "ISO8601"``, which reads stamps without one as local standard time).

    Parameters
    ----------
    text : pandas.Series of str
        The stamps as joined from the time column(s).

    Returns
    -------
    bool
        True where one stamp or more carries an offset after its time of day.

    References
    ----------
    ISO 8601-1:2019 (m) and RFC 3339 section 5.6 (m): a UTC offset (+hh:mm, +hhmm, +hh)
    or Z after the time; RFC 3339 allows a lower-case z.
    """
    return bool(text.str.contains(_OFFSET_AFTER_TIME).any())


def _hour_offset(time_format: str) -> int | None:
    """Character position of the hour in stamps of `time_format`, if fixed, else None."""
    if time_format.count("%H") != 1:
        return None
    prefix = time_format.split("%H")[0]
    if any(code in prefix for code in ("%b", "%B", "%a", "%A", "%p", "%z", "%Z", "%f", "%j")):
        return None
    return len(datetime(2001, 2, 3).strftime(prefix))


def _hour_24(text: pd.Series, failed: np.ndarray, time_format: str
             ) -> tuple[pd.Series, np.ndarray]:
    """Rewrite hour-24 stamps among `failed` as hour 0; return the text and a mask."""
    rewritten = text.copy()
    is_24 = np.zeros(len(text), dtype=bool)
    offset = _hour_offset(time_format)
    for position in np.flatnonzero(failed):
        cell = text.iloc[position]
        if offset is not None and cell[offset:offset + 2] == "24":
            # compact stamps such as 202106012400: the hour sits at a fixed place
            rewritten.iloc[position] = cell[:offset] + "00" + cell[offset + 2:]
            is_24[position] = True
            continue
        for pattern, replace in _HOUR_24:
            new, count = pattern.subn(replace, cell, count=1)
            if count:
                rewritten.iloc[position] = new
                is_24[position] = True
                break
    return rewritten, is_24


def parse_stamps(text: pd.Series, time_format: str, *, time_columns: tuple, source: str,
                 lines: np.ndarray, utc_offset: float | None = None,
                 time_zone: str | None = None, rows_after_header: int = 0) -> ParsedStamps:
    """Parse one file's stamp text into tz-naive local standard time.

    Parameters
    ----------
    text : pandas.Series of str
        Stamp text per data row (see :func:`join_time_columns`).
    time_format : str
        :func:`datetime.datetime.strptime` format, or ``"ISO8601"``.
    time_columns : tuple of str
        Column(s) the text comes from (for messages).
    source : str
        The file (for messages).
    lines : numpy.ndarray of int
        Line of the file of each row (for messages).
    utc_offset : float, optional
        Offset of the site's local standard time from UTC [hours]; needed for
        stamps carrying a UTC offset and for `time_zone`.
    time_zone : str, optional
        IANA zone (``"Area/City"``) whose civil time, with daylight saving, the
        stamps are written in.
    rows_after_header : int, optional
        Lines already skipped between header and data (for the hint when the
        first rows are further units or processing lines).

    Returns
    -------
    ParsedStamps

    Raises
    ------
    TimestampError
        A stamp does not parse (first one named with its line), stamps carry a UTC
        offset while a `time_zone` is also given, a stamp falls in the hour
        skipped when clocks go forward, or the format pairs AM/PM (``%p``) with a
        24-hour ``%H``.

    Notes
    -----
    Hour 24 (``24:00``, ``2400``) is midnight at the end of the day, i.e. ``00:00``
    of the next day. Stamps carrying a UTC offset (``+02:00``, ``Z``; format
    ``%z`` or ``"ISO8601"``) are converted to UTC and then to local standard time
    with `utc_offset`; a format ending in a literal ``Z`` (``"%Y-%m-%dT%H:%M:%SZ"``)
    declares UTC (ISO 8601) and is read as ``%z``, not as local time (unless a
    `time_zone`, e.g. ``"UTC"``, says how to read the stamps). Civil time in `time_zone`: a repeated autumn hour is
    resolved by record order (the first occurrence of a stamp in the file is
    daylight-saving time, the second standard time); a stamp occurring only once in
    the repeated hour is read as daylight-saving time. The skipped spring hour
    holds no stamps, so it becomes a gap of inserted records.
    """
    notes = []
    if counted_form(time_format) is not None:
        # counts of time since a reference ("days since 1899-12-30"): written as stamps
        # and read as such from here on (layouts38; refused before, naming the readings)
        written_format = time_format
        split = day_and_fraction(text, time_format) if not isinstance(time_columns, str) \
            and len(time_columns) == 2 else None
        if split is not None:
            # a date cell and a time cell saved as numbers (layouts48; refused before as
            # "no number" of the format)
            text = split[0]
            notes.append(ReaderNote(f"{_time_setting(time_columns)} of {source!r}: {split[1]}"))
        mismatch = (rounded_counts(text, time_format) or unit_mismatch(text, time_format)
                    or reference_mismatch(text, time_format))
        if mismatch:
            # a count in another unit (milliseconds as seconds): named by its unit, not
            # as stamps beyond 3000 years, 12-hour clocks or 2-second records (review51)
            raise TimestampError(f"{_time_setting(time_columns)} of {source!r}, time_format "
                                 f"= {setting_text(written_format)}: {mismatch}")
        # a sheet of the other day system lands 1462 days off without a word (leftovers49);
        # a file name's year is weaker evidence than the setting: warned, read as set
        # (leftovers50: an export named by its year, 4 years after its data, was refused)
        other_system = day_system_mismatch(text, time_format, source)
        if other_system:
            notes.append(f"{_time_setting(time_columns)} of {source!r}, time_format = "
                         f"{setting_text(written_format)}: {other_system}")
        text, time_format, no_count = counted_stamps(text, time_format)
        if no_count.any():
            first = int(np.flatnonzero(no_count)[0])
            number = np.isfinite(counts(text.iloc[first:first + 1]))[0]
            raise TimestampError(
                f"{_time_setting(time_columns)}: {_where(source, lines, first)} has stamp "
                f"{text.iloc[first]!r}, which is "
                + ("a count beyond some 3000 years of the reference" if number else
                   "no number") + f" of time_format = {setting_text(written_format)}; "
                f"{int(no_count.sum())} such stamp(s): give every record its count, or "
                "delete such lines in a copy of the file")
    text, whole_numbers = _whole_number_fields(text, time_format)
    # a decimal hour beside a date, or a year and a decimal day of the year (layouts40;
    # refused before as "decimal fractions, which no time_format reads")
    as_written, format_written = text, time_format
    # a decimal day of the year counted from 0 read a day early without a word (leftovers50)
    first_day, origin = day_of_year_origin(
        text, time_format, time_columns[-1] if len(time_columns) > 1 else None)
    if origin:
        notes.append(f"{_time_setting(time_columns)} of {source!r}, time_format = "
                     f"{setting_text(time_format)}: the decimal day of the year {origin}")
    text, time_format, decimal_fields = decimal_stamps(text, time_format, first_day)
    # seconds or milliseconds of zero beyond the format's last field ("13:30:00.000"
    # under "%H:%M:%S"): read past (layouts40; refused before, naming the format)
    # the stamps as the file writes them, quoted where they fail (newuser57: an error
    # quoted '2021-01-01 00:30' for the file's '2021-01-01 00:30:00')
    untailed = text
    text, _ = zero_tails(text, time_format)
    # German, French and Spanish month words under %b/%B ("05-Mär-2023", "05-déc.-2023"),
    # read as the English names (layouts44; refused before, naming months as numbers)
    text = english_months(text, time_format)
    if "%p" in time_format and "%H" in time_format and "%I" not in time_format:
        # strptime applies AM/PM to %I only: under %H "01:00 PM" is read as 01:00
        raise TimestampError(
            f"[input] time_format = {setting_text(time_format)} cannot be used: %p (AM/PM) "
            "applies only to a 12-hour %I, so with %H every PM stamp would be read as AM; "
            f"write time_format = {setting_text(time_format.replace('%H', '%I'))}")
    if "%" in time_format and not re.search(r"%[YyGs]", time_format):
        # strptime fills an absent year with 1900: a file's stamps would be read in 1900
        # (day 366 of a leap year as 1901-01-01), files of several years on each other;
        # named as the user wrote it, not as a decimal day was rewritten ("%j" named as
        # "%j %H:%M:%S" before, layouts56)
        raise TimestampError(
            f"[input] time_format = {setting_text(format_written)} cannot be used: it has no "
            "year (%Y or %y), so every stamp would be read in the year 1900; add the "
            "column holding the year to [input] time_column (several columns are joined "
            "with one space, e.g. time_format = \"%Y %j %H%M\"), or write the year into "
            "the stamps in a copy of the file (a year only in the file name is not read)")
    if "%I" in time_format and "%p" not in time_format:
        # strptime reads "01:00" under %I as 01:00 whether it was 1 AM or 1 PM: every
        # afternoon record would land on the morning's stamp
        raise TimestampError(
            f"[input] time_format = {setting_text(time_format)} cannot be used: %I is the "
            "hour of a 12-hour clock, which needs %p (AM/PM) beside it; without it 1 PM is "
            "read as 1 AM: add %p where the stamps carry AM/PM, or write the hour as %H "
            "(a 24-hour clock)")
    if time_format.upper() == "ISO8601":
        # RFC 3339, section 5.6: the "T" and the "Z" of UTC may be written in lower case
        # (m); pandas reads only upper case
        text = (text.str.replace(r"(?<=\d)t(?=\d)", "T", regex=True)
                .str.replace(r"(?<=\d)z$", "Z", regex=True))
        # ISO 8601-1:2019, section 3.2.6: the decimal sign of a fraction is a comma or a
        # full stop, the comma preferred (m): "00:30:00,000+01:00" is the stamp
        # "00:30:00.000+01:00" (layouts53; refused before as not matching the format);
        # in every form the full stop is read in: the basic format "T003000,000", a
        # space before the offset, RFC 9557's zone after it (review89)
        text = text.str.replace(
            r"(?:(?<=\d\d:\d\d:\d\d)|(?<=T\d{6})),"
            r"(?=\d+ ?(?:[Zz]|[+-]\d\d(?::?\d\d)?)?(?:\[[^\]]*\])?$)", ".", regex=True)
    if time_format.upper() == "ISO8601" or time_format.endswith("%z"):
        # RFC 9557's zone after the offset, "+02:00[Europe/Berlin]": read by the offsets
        # where they are the zone's (layouts49; refused before as not matching the format)
        text, zones, at, problem = zone_suffixes(text, time_format)
        if problem:
            raise TimestampError(
                f"{_time_setting(time_columns)}: {_where(source, lines, at)} has stamp "
                f"{as_written.iloc[at]!r}: {problem}, in a copy of the file (RFC 9557)")
        if zones:
            notes.append(ReaderNote(
                f"{_time_setting(time_columns)} of {source!r}: the stamps name their time "
                f"zone after the UTC offset ({', '.join(f'[{zone}]' for zone in zones)}, "
                "RFC 9557), each offset the zone's at that instant: read by the offsets"))
    if time_format.endswith("Z") and ends_in_utc_z(time_format) and time_zone is None:
        time_format = time_format[:-1] + "%z"       # "...%SZ": the Z of UTC, not a letter
    with_offset = _carries_offset(text, time_format)
    if with_offset and time_zone in _UTC_NAMES:
        time_zone = None      # stamps in UTC that say so, and time_zone = "UTC": consistent
    if with_offset and time_zone is not None:
        raise TimestampError(f"{_time_setting(time_columns)}: stamps in {source!r} carry a UTC "
                             f"offset ({text.iloc[0]!r}), so [input] time_zone = "
                             f"{time_zone!r} is not needed: remove it")
    if with_offset and time_format.upper() == "ISO8601":
        naive = ~text.str.contains(_OFFSET_AT_END).to_numpy()
        if naive.any():
            first = int(np.flatnonzero(naive)[0])
            raise TimestampError(
                f"{_time_setting(time_columns)}: {_where(source, lines, first)} has stamp "
                f"{text.iloc[first]!r} without a UTC offset while other stamps carry one; "
                f"{int(naive.sum())} such stamp(s): give every stamp its offset")
    if time_format.endswith("%z"):
        text = _hour_only_offsets(text)
    if "%p" in time_format:
        # "a.m." and "p.m." (style guides' spelling, some locales' exports) are AM and PM;
        # %p reads the letters alone, in either case
        text = text.str.replace(r"(?i)(?<![A-Za-z])([ap])\.\s?m\.", r"\1m", regex=True)
    text = _pad_clock_fields(text, time_format)
    unpadded = _unpadded_compact_message(text, time_format)
    if unpadded:
        first = unpadded[0]
        # layouts33: Unix seconds ('1609457400', 10 digits) under "%Y%m%d%H%M" (12) were
        # named as fields without their leading zero; a column of numbers counting time
        # in steps of 30 or 60 minutes is that clock
        clock = _numeric_clock(text)
        if clock:
            raise TimestampError(
                f"{_time_setting(time_columns)}: {_where(source, lines, first)} has stamp "
                f"{text.iloc[first]!r}, which does not match time_format = "
                f"{setting_text(time_format)}; {clock}")
        raise TimestampError(
            f"{_time_setting(time_columns)}: {_where(source, lines, first)} has stamp "
            f"{text.iloc[first]!r}, {unpadded[1]}")
    readable = _standard_time_labels(text, time_format)
    parsed = _to_datetime(readable, time_format, utc=with_offset)
    failed = parsed.isna().to_numpy()
    is_24 = np.zeros(len(text), dtype=bool)
    if failed.any():
        rewritten, is_24 = _hour_24(readable, failed, time_format)
        if is_24.any():
            again = _to_datetime(rewritten[is_24], time_format, utc=with_offset)
            parsed = parsed.copy()
            parsed[is_24] = again + pd.Timedelta(days=1)
            is_24 = is_24 & again.notna().reindex(parsed.index, fill_value=False).to_numpy()
            failed = parsed.isna().to_numpy()
    date_only = np.zeros(len(text), dtype=bool)
    date_format = _date_part(time_format) if not with_offset else None
    if failed.any() and not failed.all() and date_format is not None:
        # midnight written as the date alone ("2021-06-02" among "2021-06-02 00:30"):
        # R's as.character() of date-times and some spreadsheet exports drop 00:00
        again = pd.to_datetime(text[failed], format=date_format, errors="coerce")
        if again.notna().any():
            parsed = parsed.copy()
            parsed[failed] = again
            date_only = failed & parsed.notna().to_numpy()
            failed = parsed.isna().to_numpy()
    if failed.any():
        first = int(np.flatnonzero(failed)[0])
        hint = ""
        if text.iloc[first] == " ".join(time_columns):
            hint = ("; the header line repeats there (files joined end to end?): remove the "
                    "repeated header lines, or list the files in [input] path instead")
        elif (found := _written_where_it_changes(text, failed, time_columns)):
            hint = "; " + found
        elif first == 0 and not any(ch.isdigit() for ch in text.iloc[0][:4]):
            # the first rows without a stamp: units or processing lines (a logger writes
            # up to three under its header); the count to skip is all of them
            lead = int(np.argmin(failed)) if not failed.all() else len(failed)
            skip = rows_after_header + (lead if lead <= 4 else 1)
            hint = (f"; if the file has {'a units line' if skip == 1 else f'{skip} lines'} "
                    # a blank line among them: CR CR LF line ends (a CR LF file converted
                    # again) put one under every line (layouts36)
                    f"{'' if skip == 1 else '(units, processing or blank lines) '}under the "
                    f"header, set [input] rows_after_header = {skip}")
        elif NULL_STAMP.fullmatch(text.iloc[first]) and not failed.all():
            # a database's or a statistics program's word for no value in the time column
            hint = ("; a record without a date and time (an empty stamp or a missing "
                    "code): give it its stamp or delete that line in a copy of the file")
        elif _NO_DATE.fullmatch(text.iloc[first]) and not failed.all():
            # a record whose stamp is empty or a bare number ("-9999"): a row written
            # while the logger had no clock, or a missing code in the time column
            hint = ("; a record without a date and time (an empty stamp or a missing "
                    "code): give it its stamp or delete that line in a copy of the file")
        elif _ZERO_DATE.match(text.iloc[first]) and not failed.all():
            hint = ("; a record without a date and time (a database's zero date for no "
                    "date): give it its stamp or delete that line in a copy of the file")
        elif text[failed].str.strip().str.fullmatch(r'="[^"]*"').all():
            hint = ("; the stamps are spreadsheet formulas (=\"...\", written to keep a "
                    "cell as text), not stamps: write them without the = and the quotes in a "
                    "copy of the file (the sheet's values, not its formulas)")
        elif text[failed].str.strip().str.fullmatch(r"'[^']*'").all():
            # a program that quotes text with apostrophes (SQL and some scripting
            # exports): CSV quotes with double quotes only (RFC 4180 section 2 (m))
            hint = ("; the stamps are wrapped in single quotes ('...'), which are no CSV "
                    "quotes (those are double quotes, \"...\"): remove the single quotes "
                    "in a copy of the file, or write double quotes")
        elif (found := _impossible_date(text.iloc[first], time_format)):
            hint = "; " + found
        elif (not isinstance(time_columns, str) and len(time_columns) > 1
              and "%H:%M" in time_format
              and text[failed].str.strip().str.fullmatch(r".*\s\d{1,4}").all()
              and not _seconds_of_day(text, time_format)):
            # hours and minutes as one integer (0, 30, 100, ..., 2330): a logger's or a
            # spreadsheet's time column of HHMM numbers; minutes of the day (0, 30, 60,
            # 90, ..., 1410) are named below (layouts45: called HHMM before)
            hint = ("; the time field holds hours and minutes as one number (HHMM: 30 for "
                    "00:30, 1330 for 13:30): write %H%M for %H:%M in time_format")
        elif "%j" in time_format and text[failed].str.contains(
                r"(?<![\d.,])(?:000|0)(?![\d.,])", regex=True).all():
            hint = ("; its day of year is 0: %j counts from 001 (1 January); a logger "
                    "counting from 000 puts every record a day early: add 1 to the day "
                    "of year in a copy of the file")
        elif "%b" in time_format and (word := next(filter(None, map(
                _foreign_month, text[failed].drop_duplicates().head(400))), "")):
            # the first word no table reads, in any failed stamp ("Gen" after "Dic")
            hint = (f"; {word!r} is no English month "
                    "abbreviation, nor one of German, French or Spanish, the names %b reads: "
                    "write the months as numbers (%m) in a copy of the file")
        elif (found := _swapped_day_month(text[failed], time_format, text[~failed])):
            hint = "; " + found
        elif _OFFSET_AT_END.search(text.iloc[first]) and "%z" not in time_format \
                and _offsets_of_a_clock(text[failed], _OFFSET_AT_END_GROUP):
            hint = "; the stamp ends in a UTC offset: add %z to time_format"
        elif _NAMED_OFFSET.search(text.iloc[first]) and "%z" not in time_format:
            found = _NAMED_OFFSET.search(text.iloc[first]).group(0)
            hint = (f"; the stamp ends in {found!r}, a UTC offset: write %z for it in "
                    f"time_format (e.g. \"{time_format.rstrip()} %z\")")
        elif "%Z" in time_format and re.search(r"\s[A-Za-z]{2,6}$", text.iloc[first]):
            # %Z reads UTC, GMT, the European labels (CET, CEST, ...) and zone names of
            # the time-zone database (EST), not other summer-time abbreviations (BST,
            # PDT), several of which are ambiguous
            hint = (f"; the zone abbreviation {text.iloc[first].split()[-1]!r} is not read "
                    "(only UTC, GMT, the European labels CET, MET, EET, WET and their summer "
                    "times CEST, MEST, EEST, WEST, their German names MEZ, MESZ, OEZ, "
                    "OESZ, WEZ, WESZ, and time-zone database names such as "
                    "EST): write the "
                    "stamps with a numeric offset (+02:00, %z), or without the abbreviation "
                    "and with [input] time_zone = \"Area/City\"")
        elif (found := _period_stamps(text[failed])):
            hint = "; " + found
        elif (found := _numeric_clock(text)):
            hint = "; " + found
        elif (found := _serial_date_column(text, time_columns)):
            hint = "; " + found
        elif (found := _seconds_of_day(text, time_format)):
            hint = "; " + found
        elif (found := _finer_stamp(text.iloc[first], time_format)):
            hint = "; " + found
        elif (found := _fraction_hint(text[failed], time_format)):
            hint = "; " + found
        elif (found := _spreadsheet_cell_time(text[failed], time_columns, time_format)):
            hint = "; " + found
        elif (found := _other_format(text.iloc[first], time_format)):
            hint = "; " + found
        elif (found := _text_around_stamps(text, failed, time_format)):
            hint = "; " + found
        elif (found := _marked_stamps(text, failed, time_format)):
            hint = "; " + found
        elif (found := _summary_lines(text, failed)):
            hint = "; " + found
        elif "%" not in time_format and time_format.upper() != "ISO8601":
            hint = ("; time_format holds no strptime code: write it with codes such as "
                    "%Y %m %d %H %M (e.g. \"%Y-%m-%d %H:%M\" for 2021-06-01 13:30)")
        elif failed.all() and (found := _untailed_common_format(untailed, text, time_format)):
            hint = "; " + found
        hint = _mixed_forms(hint, text, failed, failed | is_24 | date_only, time_format,
                            source, lines)
        stamp = f"{untailed.iloc[first]!r}, which does not match"
        if decimal_fields:
            # named as written, and as read from its decimal field
            stamp = (f"{as_written.iloc[first]!r}, which read as {text.iloc[first]!r} "
                     f"(its decimal field as a clock) does not match")
        raise TimestampError(
            f"{_time_setting(time_columns)}: {_where(source, lines, first)} has stamp "
            f"{stamp} time_format = {setting_text(format_written)}; "
            f"{int(failed.sum())} stamp(s) fail to parse{hint}")
    dropped = _minutes_of_one_digit(text, time_format)
    if dropped:
        raise TimestampError(f"{_time_setting(time_columns)}: {_where(source, lines, dropped[0])}"
                             f" has stamp {text.iloc[dropped[0]]!r}{dropped[1]}")
    exchanged = _exchanged_spread(readable, parsed, ~(is_24 | date_only), time_format,
                                  with_offset)
    if exchanged:
        raise TimestampError(f"{_time_setting(time_columns)}: the stamps of {source!r} "
                             f"{exchanged}")
    index = pd.DatetimeIndex(parsed)
    index, rounded = _round_to_minute(index)
    buddhist = _buddhist_era(index)
    if buddhist:
        raise TimestampError(f"{_time_setting(time_columns)}: the stamps of {source!r} "
                             f"{buddhist}")
    offset_converted = 0
    if index.tz is not None:
        if utc_offset is None:
            raise TimestampError(f"{_time_setting(time_columns)}: stamps carry a UTC offset "
                                 f"({text.iloc[0]!r}); give the site's offset as [site] "
                                 "utc_offset to convert them to local standard time")
        index = (index.tz_convert("UTC").tz_localize(None)
                 + pd.Timedelta(hours=float(utc_offset)))
        offset_converted = len(index)
    daylight = from_utc = 0
    if time_zone is not None:
        index, daylight, from_utc = _civil_to_standard(index, text, time_zone, utc_offset,
                                                       time_columns, source, lines)
    return ParsedStamps(stamps=pd.DatetimeIndex(index), hour_24=int(is_24.sum()),
                        offset_converted=offset_converted, daylight_saving=daylight,
                        utc_zone=from_utc,
                        rounded_to_minute=rounded, date_only=int(date_only.sum()),
                        whole_numbers=whole_numbers, decimal_fields=decimal_fields,
                        notes=tuple(notes))
