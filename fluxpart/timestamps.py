"""Turn the stamp text of tower files into interval starts in local standard time.

Pure functions used by :mod:`fluxpart.io`: parse stamps (one column or several
joined by one space, hour ``24:00``, stamps carrying a UTC offset, civil time
with daylight saving in a named zone), check their order, infer the record
interval and list runs of inserted stamps. Each problem raises a
:class:`~fluxpart.errors.FluxpartError` subclass naming the setting, the file and
the line.

Time convention of the result (DESIGN.md §3): tz-naive stamps in the site's
local standard time (UTC + ``utc_offset``, no daylight saving).
"""

from __future__ import annotations

import re
import unicodedata
import warnings
from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np
import pandas as pd

from . import day_counts
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
from .errors import (
    ConfigError,
    DuplicateTimestampError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
)
from .month_words import MONTHS, english_months
from .reader_notes import ReaderNote
from .stamp_places import (
    column_utc_offset,
    date_only_backwards_hint,
    date_only_repeats_hint,
    ends_in_utc_z,
    repeated_stamp_hint,
    zone_offset,
)
from .zero_seconds import zero_tails
from .zone_suffixes import zone_suffixes

__all__ = [
    "INTERVALS_MINUTES",
    "ParsedStamps",
    "budget_year_edges",
    "budget_year_numbers",
    "budget_years",
    "check_isolated_stretch",
    "check_order",
    "written_newest_first",
    "check_time_zone",
    "clock_alignment_warning",
    "interval_change_warning",
    "infer_interval",
    "inserted_runs",
    "join_time_columns",
    "offsets_in_stamps",
    "parse_stamps",
]

#: Record intervals fluxpart accepts [minutes].
INTERVALS_MINUTES = (30, 60)

_RANGES_SHOWN = 5
_OFFSET_AT_END = re.compile(r"(?:(?<![A-Za-z])Z|[+-]\d{2}:?\d{2})$")   # not "MEZ"
_OFFSET_AT_END_GROUP = re.compile(r"((?<![A-Za-z])Z|[+-]\d{2}:?\d{2})$")
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


#: Abbreviations of a standard time that are also zone names of the time-zone database,
#: where those zones keep summer time: as a zone, "CET" reads July's 12:00 as 12:00 CEST
#: (UTC+2). Written beside a stamp the abbreviation is the standard time itself (CET =
#: UTC+1 all year; CEST names the summer time), so each is read as its fixed offset, a
#: zone "Etc/GMT-h" (POSIX sign: Etc/GMT-1 is UTC+1). Offsets: the abbreviations'
#: definitions in the IANA time-zone database's "europe" file (m). Their summer-time
#: labels (CEST, MEST, EEST, WEST: one hour ahead, same file (m)) name one offset each
#: too, so a civil-time logger that labels every stamp is read without a time_zone,
#: its repeated autumn hour told apart by the labels. Summer labels that name other
#: zones as well (BST: British Summer Time or Bangladesh Standard Time) are not read.
#: The German names of the same times, which loggers set up in German write (MEZ/MESZ
#: "Mitteleuropäische (Sommer)Zeit" = CET/CEST, OEZ/OESZ = EET/EEST, WEZ/WESZ =
#: WET/WEST; Duden and the German time law, Einheiten- und Zeitgesetz § 4 (m)), are read
#: as the English labels are.
_STANDARD_TIME_LABELS = {"CET": "Etc/GMT-1", "MET": "Etc/GMT-1", "EET": "Etc/GMT-2",
                         "WET": "Etc/GMT", "CEST": "Etc/GMT-2", "MEST": "Etc/GMT-2",
                         "EEST": "Etc/GMT-3", "WEST": "Etc/GMT-1",
                         "MEZ": "Etc/GMT-1", "MESZ": "Etc/GMT-2", "OEZ": "Etc/GMT-2",
                         "OESZ": "Etc/GMT-3", "WEZ": "Etc/GMT", "WESZ": "Etc/GMT-1"}
_STANDARD_TIME_LABEL = re.compile(
    r"(?<![A-Za-z/])(CEST|MEST|EEST|WEST|MESZ|OESZ|WESZ|CET|MET|EET|WET|MEZ|OEZ|WEZ)"
    r"(?![A-Za-z/])")

#: IANA zone names (or their first part) that denote a fixed offset rather than a place.
_OFFSET_ZONE_PREFIXES = frozenset({"UTC", "Etc", "GMT", "UCT", "Zulu", "Universal"})
#: Zone names of UTC itself: stamps that carry their offset agree with any of them.
_UTC_NAMES = frozenset({"UTC", "Etc/UTC", "Etc/UCT", "UCT", "Zulu", "Etc/Zulu", "Universal",
                        "Etc/Universal"})


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


def _where(source: str, lines: np.ndarray, position: int) -> str:
    return f"line {int(lines[position])} of {source!r}"


def _time_setting(time_columns: tuple) -> str:
    if len(time_columns) == 1:
        return f"[input] time_column {time_columns[0]!r}"
    return f"[input] time_column {list(time_columns)!r} (joined with one space)"


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


#: strptime codes read by :func:`_fixed_width_stamps`: digits and the accepted range
_FIXED_FIELDS = {"Y": (4, 1, 9999), "m": (2, 1, 12), "d": (2, 1, 31), "H": (2, 0, 23),
                 "M": (2, 0, 59), "S": (2, 0, 59)}


def _fixed_width_layout(time_format: str):
    """Byte offsets of the fields and literal characters of a fixed-width numeric format.

    Returns ``(fields, literals, width)`` for a format made only of ``%Y %m %d %H %M``
    (each once), optionally ``%S``, and printable ASCII literals (``"%Y%m%d%H%M"``,
    ``"%Y-%m-%d %H:%M:%S"``, ``"%d.%m.%Y %H:%M"``), else None.
    """
    fields, literals, position, i = {}, [], 0, 0
    while i < len(time_format):
        character = time_format[i]
        if character == "%":
            code = time_format[i + 1:i + 2]
            if code not in _FIXED_FIELDS or code in fields:
                return None
            fields[code] = position
            position += _FIXED_FIELDS[code][0]
            i += 2
            continue
        if not (character.isascii() and character.isprintable()):
            return None
        literals.append((position, ord(character)))
        position += 1
        i += 1
    if not {"Y", "m", "d", "H", "M"} <= fields.keys():
        return None
    return fields, literals, position


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


def _fixed_width_date(date_format: str | None) -> int:
    """Width of a date format of fixed-width fields, or -1."""
    if not date_format:
        return -1
    width = 0
    i = 0
    while i < len(date_format):
        if date_format[i] == "%":
            code = date_format[i + 1:i + 2]
            if code not in _FIXED_FIELDS:
                return -1
            width += _FIXED_FIELDS[code][0]
            i += 2
        else:
            width += 1
            i += 1
    return width


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


def _standard_time_labels(text: pd.Series, time_format: str) -> pd.Series:
    """Under ``%Z``, the text with the standard-time labels CET, MET, EET and WET as the
    fixed-offset zones they mean (see ``_STANDARD_TIME_LABELS``); else `text` as it is."""
    if "%Z" not in time_format:
        return text
    return text.str.replace(_STANDARD_TIME_LABEL,
                            lambda match: _STANDARD_TIME_LABELS[match[1]], regex=True)


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


def _date_part(time_format: str) -> str | None:
    """The date fields of a "date, separator, time" format ("%Y-%m-%d" of "%Y-%m-%d %H:%M"),
    or None where the format has no such split (compact or time-first formats)."""
    match = re.search(r"[ T](%[HIMSp])", time_format)
    if match is None:
        return None
    date = time_format[:match.start()]
    if re.search(r"%[HIMSpzZf]", date) or "%d" not in date and "%j" not in date:
        return None
    return date


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


def zone_standard_hours(zone, when=None) -> float:
    """The standard (winter) offset of a time zone from UTC [hours].

    Parameters
    ----------
    zone : zoneinfo.ZoneInfo or str
        The zone, or its IANA name (known to the system's time-zone database).
    when : datetime-like, optional
        A moment in the year to read it for (default 2020-01-01).

    Returns
    -------
    float
        The smaller of the offsets without daylight saving on 1 January and 1 July.

    References
    ----------
    IANA time zone database (tz), its ``dst`` field: the part of an offset that is
    daylight saving (m).
    """
    from zoneinfo import ZoneInfo

    zone = ZoneInfo(zone) if isinstance(zone, str) else zone
    moment = pd.Timestamp(when if when is not None else "2020-01-01").to_pydatetime()
    hours = set()
    for month in (1, 7):
        probe = moment.replace(month=month, day=1, hour=12, tzinfo=zone)
        hours.add((probe.utcoffset() - probe.dst()) / timedelta(hours=1))
    return min(hours)


def check_time_zone(time_zone, utc_offset: float, when=None) -> str:
    """Check an ``[input] time_zone`` setting against ``[site] utc_offset``.

    Parameters
    ----------
    time_zone : str
        IANA zone name, e.g. ``"Europe/Berlin"``.
    utc_offset : float
        Offset of the site's local standard time from UTC [hours].
    when : datetime-like, optional
        A moment at which to read the zone's standard offset (default 2020-01-01).

    Returns
    -------
    str
        The zone name.

    Raises
    ------
    ConfigError
        The name is not a zone known to the system's time-zone database, or the
        zone's standard (winter) offset differs from `utc_offset` (not checked for
        ``"UTC"``, ``"Etc/UTC"`` and the like: stamps kept in UTC are converted to the
        site's local standard time).
    """
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    if not isinstance(time_zone, str) or not time_zone:
        raise ConfigError(f"[input] time_zone = {setting_text(time_zone)}: expected a zone name such as "
                          "\"Europe/Berlin\" or \"Australia/Sydney\"")
    try:
        zone = ZoneInfo(time_zone)
    except (ZoneInfoNotFoundError, ValueError, OSError):
        from .zone_names import zone_shorthand_hint

        # an abbreviation ("CST") or a fixed offset ("UTC+1") said as such (mistakes56)
        raise ConfigError(f"[input] time_zone = {setting_text(time_zone)} is not a known time zone; use an "
                          "\"Area/City\" name such as \"Europe/Berlin\""
                          + zone_shorthand_hint(time_zone, utc_offset)) from None
    standard = zone_standard_hours(zone, when)
    names_offset = time_zone.split("/")[0] in _OFFSET_ZONE_PREFIXES
    if names_offset and standard == 0.0:
        # "UTC", "Etc/UTC": stamps kept in UTC (as many loggers are), converted to the
        # site's local standard time; the name states the stamps' time, not the site's
        return time_zone
    if abs(standard - float(utc_offset)) > 1e-9:
        posix = ""
        if time_zone.startswith("Etc/GMT"):
            posix = (f"; note that Etc/GMT zones carry the POSIX sign (\"Etc/GMT-1\" is UTC+1), "
                     f"so UTC{float(utc_offset):+g} is \"Etc/GMT{-float(utc_offset):+g}\"")
        raise ConfigError(f"[input] time_zone = {setting_text(time_zone)} has standard time UTC{standard:+g} "
                          f"but [site] utc_offset = {float(utc_offset):g}; set utc_offset = "
                          f"{standard:g} (the offset without daylight saving){posix}")
    return time_zone


def _civil_to_standard(index: pd.DatetimeIndex, text: pd.Series, time_zone: str, utc_offset,
                       time_columns: tuple, source: str, lines: np.ndarray):
    """Civil (daylight-saving) stamps of `time_zone` -> local standard time.

    Returns the standard-time stamps, the count of daylight-saving stamps among them and
    the count of stamps moved from a UTC zone to the site's offset.
    """
    if utc_offset is None:
        raise ConfigError("[input] time_zone needs [site] utc_offset (the zone's standard "
                          "offset)")
    check_time_zone(time_zone, utc_offset, index[0] if len(index) else None)
    # record order resolves the repeated hour: a stamp later than every stamp before it
    # in the file is daylight-saving time; one at or before a stamp already read is the
    # second pass, standard time (a file that begins inside the hour, or whose first pass
    # lacks a record, goes back to a stamp it has not held before: refused when read as
    # daylight-saving time before review52)
    values = index.asi8
    first = np.ones(len(values), dtype=bool)
    first[1:] = values[1:] > np.maximum.accumulate(values)[:-1]
    try:
        aware = index.tz_localize(time_zone, ambiguous=first, nonexistent="raise")
    except Exception:  # pandas raises its own error type for a nonexistent time
        aware = index.tz_localize(time_zone, ambiguous=first, nonexistent="NaT")
        bad = int(np.flatnonzero(aware.isna())[0])
        raise TimestampError(
            f"{_time_setting(time_columns)}: {_where(source, lines, bad)} has stamp "
            f"{text.iloc[bad]!r}, which does not exist in [input] time_zone = {setting_text(time_zone)} "
            "(the hour skipped when clocks go forward); if the file is in standard time "
            "all year, remove time_zone") from None
    in_utc = aware.tz_convert("UTC").tz_localize(None)
    standard = in_utc + pd.Timedelta(hours=float(utc_offset))
    # the zone's offset at each stamp [h]; daylight-saving stamps are those ahead of the
    # zone's standard offset, which is utc_offset (checked above) except for a UTC zone
    # (a logger kept on UTC at a site of any offset), whose stamps all move by utc_offset
    zone_hours = np.asarray((index - in_utc) / pd.Timedelta(hours=1), dtype=float)
    utc_zone = (time_zone.split("/")[0] in _OFFSET_ZONE_PREFIXES
                and not np.any(zone_hours != 0.0))
    zone_standard = 0.0 if utc_zone else float(utc_offset)
    daylight = int(np.sum(zone_hours > zone_standard + 1e-9))
    from_utc = len(index) if utc_zone and float(utc_offset) != 0.0 else 0
    return standard, daylight, from_utc


def _day_month_mixed(stamps) -> bool:
    """True where the stamps go back in time but run strictly forward once day and month
    are exchanged in each stamp whose day could be a month (12 or less, not equal to it)
    (layouts31: a spreadsheet reading day-first stamps month-first where it could,
    named "a logger clock reset")."""
    index = pd.DatetimeIndex(stamps)
    exchangeable = np.asarray((index.day <= 12) & (index.day != index.month))
    if not exchangeable.any() or exchangeable.all():
        return False
    parts = pd.DataFrame({"year": index.year,
                          "month": np.where(exchangeable, index.day, index.month),
                          "day": np.where(exchangeable, index.month, index.day),
                          "hour": index.hour, "minute": index.minute, "second": index.second})
    exchanged = pd.to_datetime(parts, errors="coerce")
    return bool(exchanged.notna().all() and (np.diff(exchanged.to_numpy()) > np.timedelta64(0)).all())


def _has_daylight_saving(time_zone: str, year: int) -> bool:
    """True where the IANA zone's UTC offset differs between January and July of `year`
    (a zone of one offset all year, ``"Etc/GMT-1"`` or ``"UTC"``, has none); True for a
    zone that cannot be looked up (the reader names it elsewhere)."""
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    try:
        zone = ZoneInfo(time_zone)
    except (ZoneInfoNotFoundError, ValueError, OSError):
        return True
    return (datetime(year, 1, 15, tzinfo=zone).utcoffset()
            != datetime(year, 7, 15, tzinfo=zone).utcoffset())


def check_order(stamps: pd.DatetimeIndex, text: pd.Series, source: str, lines: np.ndarray,
                time_zone: str | None = None) -> None:
    """Raise for repeated stamps or stamps going backwards within one file.

    Exact duplicate rows must have been dropped before; a repeated stamp here
    carries different values.
    """
    duplicated = stamps.duplicated(keep=False)
    if duplicated.any():
        first = int(np.flatnonzero(duplicated)[0])
        rows = np.flatnonzero(stamps == stamps[first])
        listed = ", ".join(str(int(lines[r])) for r in rows[:5])
        hint = "keep one of them in a copy of the file"
        told = (date_only_repeats_hint(pd.DatetimeIndex(stamps), text)
                or repeated_stamp_hint(pd.DatetimeIndex(stamps)))
        repeated = pd.DatetimeIndex(stamps[duplicated])
        same_day = repeated[repeated.normalize() == stamps[first].normalize()]
        # a daylight-saving repeat: one or two clock hours of one day in an autumn month;
        # a zone of one offset all year ("Etc/GMT-1", "UTC") reads no such repeat either
        # (round mistakes41: named only as a repeated stamp, "keep one of them")
        fixed = time_zone is not None and not _has_daylight_saving(time_zone,
                                                                   stamps[first].year)
        if ((time_zone is None or fixed) and len(same_day.floor("h").unique()) <= 2
                and stamps[first].month in (3, 4, 9, 10, 11)):
            zone = (f" (time_zone = {setting_text(time_zone)} keeps one offset all year, "
                    "without daylight saving)" if fixed else "")
            hint = ("if the file is in civil time with daylight saving, set [input] "
                    f"time_zone = \"Area/City\"{zone}; otherwise " + (told or hint))
        elif told:
            hint = told
        elif (time_zone is None and len(repeated.unique()) >= 2
              and repeated.max() - repeated.min() <= pd.Timedelta(hours=1)):
            # the same pattern outside the months of daylight-saving changes: a clock set
            # back by an hour on another date (a logger switched to UTC or another zone)
            hint = ("the stamps of up to an hour repeat there, as where a clock is set back "
                    "by an hour (a logger switched to UTC or another zone?): correct the "
                    "stamps after it in a copy of the file, or keep one of each repeated "
                    "record if they are copies")
        raise DuplicateTimestampError(
            f"stamp {text.iloc[first]!r} occurs {len(rows)} times with different values in "
            f"{source!r} (lines {listed}); {int(stamps.duplicated().sum())} repeated stamp(s) "
            f"in all; {hint}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    backwards = np.flatnonzero(steps < 0)
    if backwards.size:
        row = int(backwards[0]) + 1
        back_days = -float(steps[row - 1]) / 86400.0
        swapped = (date_only_backwards_hint(pd.DatetimeIndex(stamps), text, backwards)
                   or _runs_in_reverse_order(stamps, backwards)
                   or _block_filling_a_gap(stamps, backwards))
        if swapped:
            hint = swapped
        elif _day_month_mixed(stamps):
            hint = ("read with the day and the month exchanged, the stamps whose day is 12 "
                    "or less fall in order with the others: day and month are written in "
                    "two orders (a spreadsheet that read day-first stamps month-first where "
                    "the day allowed?); write every stamp in one order in a copy of the file")
        elif back_days > 1.0 and (found := _sorted_by_another_column(stamps, backwards)):
            hint = found
        elif back_days > 1.0:
            # records merely out of order are a few records apart; a jump back by days
            # or years is a logger clock reset, which sorting would turn into a false
            # stretch of records far from the rest
            hint = (f"the stamps jump back by {back_days:.0f} days ({backwards.size} backward "
                    "step(s) in all): a logger clock reset or rows of another period; correct "
                    "or remove those rows in a copy of the file (sorting would misplace them)")
        elif _midnight_of_the_day_it_ends(stamps, row):
            hint = ("every record ending at midnight seems dated with the day it ends "
                    "(00:00 after 23:30 of the same date): write midnight as 24:00 of that "
                    "day or as 00:00 of the next day in a copy of the file (sorting would "
                    "place each such record a day early)")
        elif (time_zone is not None and -float(steps[row - 1]) <= 3600.0
              and stamps[row].month in (3, 4, 9, 10, 11)):
            # the autumn hour that civil time repeats is resolved by record order (its
            # first records daylight-saving time); a file sorted by civil stamp interleaves
            # the two hours, which sorting again cannot undo
            hint = ("in civil time of [input] time_zone the autumn hour repeats and is read "
                    "by record order (its first records daylight-saving time, the next "
                    "standard time); the file seems sorted by civil stamp, which interleaves "
                    "the two hours: put that hour's daylight-saving records before its "
                    "standard-time ones, as the logger wrote them, in a copy of the file")
        else:
            hint = "sort a copy of the file by time"
        raise NonMonotonicTimestampError(
            f"stamps go backwards at {_where(source, lines, row)}: {text.iloc[row]!r} comes "
            f"after {text.iloc[row - 1]!r}; {hint}")


def written_newest_first(stamps: pd.DatetimeIndex) -> bool:
    """True where a file's stamps go backwards at 99 % of their steps or more (three
    stamps at least): an export sorted newest first, whose records read in reverse
    order are the logger's (a record or two out of place among them aside).

    References
    ----------
    Data portals and databases sort an export by time in either direction (SQL's ORDER
    BY ... DESC; common practice).
    """
    if len(stamps) < 3:
        return False
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    return bool((steps < 0).sum() >= 0.99 * steps.size)


def _runs_in_reverse_order(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where a file is two runs of records in time order written in reverse
    order, the second ending a day or less before the first begins; else "".

    A logger's ring memory read out from the start of its memory rather than from its
    oldest record gives the newest records first and then the older ones, which end
    where the newer begin; two files joined end to end in the wrong order (without the
    second header) look alike. Sorting puts every record in its place, and no stamp
    repeats, unlike a clock reset (a jump back to the logger's default date, years before
    the record), whose rows sorting would misplace. The message said "sorting would
    misplace them" for both.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The file's stamps in file order (no repeats).
    backwards : numpy.ndarray of int
        Positions of the steps that go back in time.

    Returns
    -------
    str
        The hint naming the two runs and the fix, or "".

    References
    ----------
    A ring (circular) buffer overwrites its oldest entry and is read in order from the
    entry after the last one written (common practice).
    """
    if backwards.size != 1 or len(stamps) < 4:
        return ""
    cut = int(backwards[0]) + 1
    first, second = stamps[:cut], stamps[cut:]
    gap = first[0] - second[-1]
    if gap <= pd.Timedelta(0) or gap > pd.Timedelta(days=1):
        return ""
    return (f"the file holds two runs of records in time order, the second "
            f"({second[0]:%Y-%m-%d %H:%M} .. {second[-1]:%Y-%m-%d %H:%M}) ending "
            f"{gap / pd.Timedelta(minutes=1):g} minutes before the first "
            f"({first[0]:%Y-%m-%d %H:%M} .. {first[-1]:%Y-%m-%d %H:%M}) begins: a logger's "
            "ring memory read out from the start of its memory, or two files joined in the "
            "wrong order; sort a copy of the file by time (no stamp repeats)")


def _block_filling_a_gap(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where the records after the one step back in time are a block that fills
    a gap of the others exactly, one record interval after the record before the gap
    to one before the record after it; else "".

    A day read late from a logger's memory card and appended at the end of the file (or
    pasted after the records of the day it was read) is such a block: sorting puts
    every record in its place, and no stamp repeats. A clock reset writes on from its
    new time into records the file holds (a stamp repeats) or to a time the other
    records leave no gap for; its rows sorting would misplace, as the message said of
    both before layouts43. Parameters as :func:`_runs_in_reverse_order`'s; the hint
    returned names the block, the gap it fills and the fix, or is "".
    """
    if backwards.size != 1 or len(stamps) < 4:
        return ""
    cut = int(backwards[0]) + 1
    after = np.flatnonzero(np.asarray(stamps[cut:] > stamps[cut - 1]))
    end = cut + int(after[0]) if after.size else len(stamps)
    block = stamps[cut:end]
    others = stamps[:cut].append(stamps[end:])
    at = int(others.searchsorted(block[0]))
    if at == 0 or at == len(others) or block[-1] >= others[at] or len(block) < 2:
        return ""
    step = pd.Series(block).diff().median()
    if others[at - 1] + step != block[0] or block[-1] + step != others[at]:
        return ""
    return (f"the {len(block)} records from there ({block[0]:%Y-%m-%d %H:%M} .. "
            f"{block[-1]:%Y-%m-%d %H:%M}) fill the gap between {others[at - 1]:%Y-%m-%d %H:%M} "
            f"and {others[at]:%Y-%m-%d %H:%M} of the others exactly (records read late from "
            "the logger's memory and appended?); sort a copy of the file by time (no stamp "
            "repeats)")


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


def _sorted_by_another_column(stamps: pd.DatetimeIndex, backwards: np.ndarray) -> str:
    """The fix where the file's runs of records in time order interleave (in time order
    the records pass from one run to another more than twice a run) and no stamp
    repeats; else "". Asked where the stamps jump back by more than a day: a midnight
    dated a day early and a civil time's autumn hour sorted by stamp have their own
    hints.

    A table sorted by another column (a quality flag, a value) in a spreadsheet or a
    database query is such a file: with a stable sort, each of the column's values
    keeps its records in time order, and the runs interleave. A clock reset writes its
    later records over a period the file holds (a stamp repeats, refused before this
    test) or into another period (the records pass between runs twice); the message
    named a clock reset and "sorting would misplace them" for a file sorted by its flag
    before layouts45. Parameters as :func:`_runs_in_reverse_order`'s; the hint returned
    names the runs and the fix, or is "".

    References
    ----------
    Spreadsheets and SQL's ORDER BY sort rows by any column, stably or not (common
    practice).
    """
    if len(stamps) < 4 or not stamps.is_unique:
        return ""
    run = np.zeros(len(stamps), dtype=np.int64)
    run[backwards + 1] = 1
    run = np.cumsum(run)
    # in time order, the records pass from one run to another more than twice a run: a
    # clock reset's rows (or a block out of place) pass twice at most
    passes = int((np.diff(run[np.argsort(np.asarray(stamps), kind="stable")]) != 0).sum())
    if passes <= 2 * (int(run[-1]) + 1):
        return ""
    return (f"the file holds {int(run[-1]) + 1} runs of records in time order that interleave "
            f"over the same period ({stamps.min():%Y-%m-%d %H:%M} .. "
            f"{stamps.max():%Y-%m-%d %H:%M}), and no stamp repeats: rows sorted by another "
            "column (a quality flag or a value, in a spreadsheet or a query?); sort a copy "
            "of the file by time")


def _scattered_seconds(stamps: pd.DatetimeIndex, steps: np.ndarray, describe,
                       interval=None) -> str:
    """The message where stamps are 30- or 60-minute records whose seconds scatter beyond
    the rounding of :data:`JITTER_SECONDS` (a logger stamping the moment it writes each
    record, seconds to a minute after the interval ends), else ''.

    The test: most steps lie within a minute of one interval, and stamps off the whole
    minute are common; such records are neither refused as another interval nor read at
    clock times that drift by seconds from record to record.
    """
    if steps.size == 0:
        return ""
    candidates = INTERVALS_MINUTES if interval is None else (interval,)
    for minutes in candidates:
        near = np.abs(steps - minutes) < 1.0
        if near.mean() < 0.5 or not (near & (steps != minutes)).any():
            continue
        seconds = np.asarray(stamps.second + stamps.microsecond / 1e6, dtype=float)
        off = np.minimum(seconds, 60.0 - seconds)
        far = np.flatnonzero(off > JITTER_SECONDS)
        if far.size < 0.1 * len(stamps):
            continue
        first = int(far[0])
        drift = _steady_drift(stamps, minutes)
        if drift:
            return (f"the stamps of these {minutes}-minute records move steadily off the "
                    f"clock grid, {drift} ({far.size} stamps more than {JITTER_SECONDS:g} s "
                    f"from a whole minute, the first at {describe(first)}): a logger clock "
                    "running fast or slow and not set during the record? Write each stamp "
                    "as the whole minute of its interval's end (or start) in a copy of the "
                    "file")
        return (f"the stamps of these {minutes}-minute records carry seconds that vary "
                f"from record to record ({stamps[first]:%Y-%m-%d %H:%M:%S} at "
                f"{describe(first)}; {far.size} stamps more than {JITTER_SECONDS:g} s from "
                f"a whole minute, up to {off.max():.0f} s): only stamps within "
                f"{JITTER_SECONDS:g} s of a whole minute are rounded (clock jitter). A logger "
                "that stamps the moment it writes each record? Write each stamp as the "
                "whole minute of its interval's end (or start) in a copy of the file")
    return ""


def _steady_drift(stamps: pd.DatetimeIndex, minutes: int) -> str:
    """Where the stamps' distance from the `minutes` grid grows (or shrinks) steadily, a
    clock drifting by seconds a day (layouts31: named a logger stamping the moment it
    writes), the drift as text ("+3.0 s a day, from +0 s to +120 s"), else ''.

    Steady: 99 % of the steps of the distance move one way or stay within the jitter
    rounding (:data:`JITTER_SECONDS`), and the distance moves 60 s or more in all. A
    quartz clock drifts so by a few seconds a day (common practice).
    """
    index = pd.DatetimeIndex(stamps)
    since = np.asarray((index - index[0].floor("D")) / pd.Timedelta(seconds=1), dtype=float)
    period = minutes * 60.0
    offset = (since + period / 2) % period - period / 2
    offset = np.unwrap(offset, period=period)
    steps = np.diff(offset)
    if steps.size < 2 or abs(offset[-1] - offset[0]) < 60.0:
        return ""
    sign = np.sign(offset[-1] - offset[0])
    if np.mean(sign * steps >= -JITTER_SECONDS) < 0.99:
        return ""
    days = (index[-1] - index[0]) / pd.Timedelta(days=1)
    if days <= 0:
        return ""
    rate = (offset[-1] - offset[0]) / days
    return f"by {rate:+.1f} s a day (from {offset[0]:+.0f} s to {offset[-1]:+.0f} s)"


def _midnight_of_the_day_it_ends(stamps: pd.DatetimeIndex, row: int) -> bool:
    """Whether the stamp at `row`, which goes back, is 00:00 of the date of the stamp before
    it, and every backward step of the file is such a midnight (a logger that dates the
    record ending at midnight with the day that ends)."""
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1))
    back = np.flatnonzero(steps < 0) + 1
    at_midnight = (stamps[back] == stamps[back].normalize())
    same_date = stamps[back].normalize() == stamps[back - 1].normalize()
    return bool(row in back and at_midnight.all() and same_date.all())


#: A stretch of stamps this far from the rest of the record [days] ... (our choice: more
#: than a year, so that no budget year could join it to the rest)
ISOLATED_GAP_DAYS = 366.0
#: ... and at most this long [days] is refused as a clock reset (our choice: shorter than
#: a month, so that no budget year of its own could be judged from it; a logger clock
#: reset to its default date runs for the days until someone sets it)
ISOLATED_SPAN_DAYS = 31.0


def check_isolated_stretch(stamps: pd.DatetimeIndex, describe=None) -> None:
    """Raise where a short stretch of records lies more than a year from the rest.

    Files of a glob are read in time order, so the records a logger wrote after its clock
    was reset to a default date (2000-01-01 ...) in a file of their own, or at the start
    of a file before the clock was set, go forward in time like any other: read, they
    would open a record of decades of inserted, empty years.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps of every file.
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Raises
    ------
    TimestampError
        A step of more than :data:`ISOLATED_GAP_DAYS` with at most
        :data:`ISOLATED_SPAN_DAYS` of records on one side of it.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    if len(stamps) < 2:
        return
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(days=1), dtype=float)
    for gap in np.flatnonzero(steps > ISOLATED_GAP_DAYS):
        before = (stamps[gap] - stamps[0]) / pd.Timedelta(days=1)
        after = (stamps[-1] - stamps[gap + 1]) / pd.Timedelta(days=1)
        if min(before, after) > ISOLATED_SPAN_DAYS:
            continue
        first, last = (0, gap) if before <= after else (gap + 1, len(stamps) - 1)
        where = f"from {describe(first)} to {describe(last)}"
        start, end = describe(first).split(" of ", 1), describe(last).split(" of ", 1)
        if len(start) == len(end) == 2 and start[1] == end[1]:
            where = f"lines {start[0].split()[-1]} to {end[0].split()[-1]} of {start[1]}"
        raise TimestampError(
            f"the {last - first + 1} record(s) of {where} "
            f"({stamps[first]:%Y-%m-%d %H:%M} .. {stamps[last]:%Y-%m-%d %H:%M}) lie "
            f"{steps[gap]:.0f} days from the rest of the record: a logger clock reset to "
            "its default date, or a file of another period in [input] path? Remove those "
            "rows (or that file) in a copy, or read the periods as separate sites")


#: Said where records are shorter than 30 minutes (layouts43: a 10-minute file was told
#: only to average "the file", fluxes included): the mean of a flux's shorter-period
#: covariances lacks the covariance of eddies longer than those periods, so the flux
#: of 30 minutes is best computed again from the high-frequency data. References:
#: Finnigan, J. J. et al. (2003), A re-evaluation of long-term flux measurement
#: techniques, part I: averaging and coordinate rotation, Boundary-Layer Meteorology
#: 107, 1-48 (m).
_SHORT_FLUX_NOTE = ("; the weather by its means, while the CO2 flux is best computed again "
                    "over 30 minutes from the high-frequency data (a mean of shorter "
                    "periods' fluxes misses the longer eddies' share, Finnigan et al. 2003)")


def infer_interval(stamps: pd.DatetimeIndex, declared=None, describe=None) -> int:
    """Return the record interval [minutes] of sorted, unique `stamps`.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps.
    declared : {30, 60}, optional
        ``[input] interval_minutes``; inferred from the most common spacing if omitted.
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Raises
    ------
    SpacingError
        A single record, a most common spacing other than 30 or 60 minutes, or a
        step that is not a whole multiple of the interval.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    setting = declared is not None
    if declared is None:
        if steps.size == 0:
            raise SpacingError("the file has a single record, so its interval cannot be "
                               "inferred; set [input] interval_minutes = 30 or 60")
        found, counts = np.unique(steps, return_counts=True)
        typical = float(found[np.argmax(counts)])
        if typical not in INTERVALS_MINUTES:
            share = counts.max() / steps.size
            seconds = _scattered_seconds(stamps, steps, describe)
            if seconds:
                raise SpacingError(seconds)
            raise SpacingError(f"the most common spacing between stamps is {typical:g} minutes "
                               f"({100 * share:.0f} % of "
                               f"steps{_spacing_where(steps, typical, describe)}); "
                               "fluxpart needs 30- or 60-minute records: average "
                               f"{_spacing_what(steps, typical)} to 30 or 60 minutes first"
                               f"{_SHORT_FLUX_NOTE if typical < 30 else ''}")
        declared = int(typical)
    irregular = np.flatnonzero(np.abs(steps / declared - np.round(steps / declared)) > 1e-9)
    if irregular.size:
        row = int(irregular[0]) + 1
        seconds = _scattered_seconds(stamps, steps, describe, declared)
        if seconds:
            raise SpacingError(seconds)
        found = sorted({f"{s:g}" for s in steps[irregular][:10]})
        # most steps off a declared interval: the setting, not the file, is at odds
        values, counts = np.unique(steps, return_counts=True)
        typical = float(values[np.argmax(counts)])
        fix = (f"set interval_minutes = {typical:g}, or remove it to have the interval "
               "read from the stamps" if typical in INTERVALS_MINUTES else
               "fluxpart needs 30- or 60-minute records: average the file to 30 or 60 "
               "minutes first")
        mismatch = (f"; [input] interval_minutes = {declared} is set, while most stamps are "
                    f"{typical:g} minutes apart: {fix}"
                    if setting and 2 * irregular.size >= steps.size else "")
        cause = (_midnight_at_last_minute(stamps, declared)
                 or _grid_moved(stamps, row, declared, describe))
        raise SpacingError(
            f"stamps are {steps[irregular[0]]:g} minutes apart at {describe(row)} "
            f"({stamps[row - 1]} -> {stamps[row]}), not a whole multiple of the "
            f"{declared}-minute interval; {irregular.size} such step(s), spacings found: "
            f"{', '.join(found)} minutes{mismatch}{cause}")
    return int(declared)


def _midnight_at_last_minute(stamps: pd.DatetimeIndex, interval: int) -> str:
    """``"; every stamp off the ... grid is 23:59 ..."`` where the only stamps off the
    clock grid of `interval` minutes are 23:59 (two or more), else ``""``.

    A logger (or its export) that keeps every stamp within the day it closes writes the
    record ending at midnight as 23:59 of that day, one minute before the grid's 24:00:
    the steps around it are one minute short and long (29 and 31 minutes), which the
    spacing check names without a cause.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The file's stamps.
    interval : int
        The record interval [minutes].

    Returns
    -------
    str
        The hint (with its leading "; "), or "".

    References
    ----------
    ISO 8601-1:2019 (m): the end of a day is 24:00 of that day, the same instant as 00:00
    of the next; 23:59 is a minute before it.
    """
    minutes = np.asarray(stamps.hour * 60 + stamps.minute, dtype=int)
    off = (minutes % interval != 0) | (np.asarray(stamps.second) != 0)
    if off.sum() < 2 or not np.all(minutes[off] == 23 * 60 + 59):
        return ""
    return (f"; every stamp off the {interval}-minute clock grid is 23:59 ({int(off.sum())} "
            "of them): the records ending at midnight seem stamped with the last minute of "
            "the day they end; write them as 24:00 of that day (or 00:00 of the next) in a "
            "copy of the file")


def _grid_moved(stamps: pd.DatetimeIndex, row: int, interval: int, describe) -> str:
    """``"; the stamps from ... to ... lie N minute(s) later ..."`` where the clock grid
    moves at stamp `row` and stays moved for a day or more, else ``""`` (shift in
    [minutes]).

    A logger clock set by hand or drifting by whole minutes between two
    synchronisations writes its stamps at minute 1 and 31 (or 29 and 59) from one
    record on: a single step of 31 or 29 minutes, then regular records on another
    grid. The refusal named only the odd step; the moved grid and its extent tell the
    cause (our choice of length: a day of records, as for the interval change).
    """
    minutes = np.asarray((stamps - stamps[0]) / pd.Timedelta(minutes=1), dtype=float)
    phase = np.mod(minutes, interval)
    before, after = phase[row - 1], phase[row]
    if np.isclose(before, after):
        return ""
    same = np.isclose(phase[row:], after)
    run = int(np.argmin(same)) if not same.all() else same.size
    if run < 24 * 60 // interval:
        return ""
    moved = (after - before) % interval
    shift = moved if moved <= interval / 2 else moved - interval
    end = (f"to {describe(row + run - 1)}" if row + run < stamps.size else
           "to the last record")
    return (f"; the stamps from {describe(row)} {end} ({run} records) lie "
            f"{abs(shift):g} minute(s) {'later' if shift > 0 else 'earlier'} on the clock "
            "grid than those before (a logger clock set or drifting by whole minutes?): "
            "align them in a copy of the file")


def _spacing_where(steps: np.ndarray, typical: float, describe) -> str:
    """Where the steps of a refused spacing run: ``", from line .. to line .."``.

    Several files read as one record (30-minute files of one half-year and 10-minute
    files of the other, a logger reprogrammed) were refused naming no file; the first
    and last record of the steps of `typical` minutes name them (`describe` gives file
    and line).
    """
    at = np.flatnonzero(steps == typical)
    # the first step's earlier stamp may close a stretch of another spacing (the last
    # record of a 30-minute file): name its later stamp, unless it opens the record
    first = describe(int(at[0]) + (at[0] > 0))
    last = describe(int(at[-1]) + 1)
    return f", from {first} to {last}"


def _spacing_what(steps: np.ndarray, typical: float) -> str:
    """``"the file"``, or ``"those records"`` where other steps are 30 or 60 minutes."""
    others = np.isin(steps, INTERVALS_MINUTES).sum()
    # a record that is 30- or 60-minute in part (another file, another program) keeps
    # that part: only the records of the other spacing need averaging
    return "those records" if others else "the file"


def interval_change_warning(stamps: pd.DatetimeIndex, interval_minutes: int,
                            describe=None) -> str | None:
    """A warning where the stamps step by twice the interval for a day or more, else None.

    A logger whose interval changed (30 to 60 minutes) within the record writes a
    stretch of stamps two intervals apart: each of its records would be read as one
    record of `interval_minutes` (the later half of its true interval) and every other
    interval inserted as missing. A day of such steps in a row does not come from
    records lost one at a time (our choice of length: one day of the longer records).

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        Sorted unique stamps as in the file.
    interval_minutes : int
        The record interval [minutes].
    describe : callable, optional
        ``describe(position)`` -> text naming the file and line of stamp `position`.

    Returns
    -------
    str or None
        The warning, naming the first such stretch.
    """
    describe = describe or (lambda position: f"record {position + 1}")
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    double = np.concatenate([[False], steps == 2 * interval_minutes, [False]])
    edges = np.flatnonzero(np.diff(double.astype(np.int8)))
    first, last = edges[0::2], edges[1::2]          # steps first .. last - 1 are double
    long = (last - first) >= 24 * 60 // (2 * interval_minutes)
    if not long.any():
        return None
    start, end = int(first[long][0]), int(last[long][0])
    return (f"the stamps are {2 * interval_minutes} minutes apart for {end - start} steps in a row "
            f"from {describe(start)} ({stamps[start]} .. {stamps[end]}; {int(long.sum())} such "
            f"stretch(es) of a day or more) in a record of {interval_minutes}-minute intervals: "
            f"if the logger changed its interval, each of those records is read as "
            f"{interval_minutes} minutes and every other interval inserted as missing; average "
            f"the whole record to {2 * interval_minutes} minutes in a copy of the file")


def clock_alignment_warning(starts: pd.DatetimeIndex, interval_minutes: int,
                            time_marks: str) -> str | None:
    """Return a warning when interval starts are off the clock grid, else None."""
    midnight = starts.normalize()
    offset = np.asarray((starts - midnight) / pd.Timedelta(minutes=1), dtype=float)
    off_grid = np.mod(offset, interval_minutes) != 0
    if not off_grid.any():
        return None
    minute = offset[np.flatnonzero(off_grid)[0]] % 60
    text = (f"interval starts fall at minute {minute:g} of the hour, not on the "
            f"{interval_minutes}-minute clock grid ({int(off_grid.sum())} of {len(starts)} "
            "records)")
    # the stamp's place in its interval explains an offset of half an interval or a whole
    # one from the declared place; any other offset is the clock's or the export's
    half_off = np.mod(minute, interval_minutes) == interval_minutes / 2
    if half_off:
        return f"{text}; check [input] time_marks = {setting_text(time_marks)}"
    return (f"{text}: read at their own times (the sun's position and the budget years' "
            "edges follow them); a logger clock off by minutes, or stamps of the last minute "
            "or second of each interval? Align the stamps in a copy of the file")


def inserted_runs(inserted: pd.DatetimeIndex, interval_minutes: int) -> tuple[tuple, int]:
    """Return the first few runs of inserted stamps (first, last, count) and the run count."""
    if len(inserted) == 0:
        return (), 0
    steps = np.asarray((inserted[1:] - inserted[:-1]) / pd.Timedelta(minutes=interval_minutes))
    breaks = np.flatnonzero(steps != 1)
    starts = np.concatenate([[0], breaks + 1])
    ends = np.concatenate([breaks, [len(inserted) - 1]])
    ranges = tuple((inserted[s], inserted[e], int(e - s + 1))
                   for s, e in zip(starts[:_RANGES_SHOWN], ends[:_RANGES_SHOWN], strict=True))
    return ranges, len(starts)


def budget_years(index, year_start: str = "01-01") -> pd.DataFrame:
    """Budget year of each interval start, for budgets that run from `year_start`.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts in local standard time.
    year_start : str
        First day of the budget year as ``"MM-DD"`` (``"01-01"``: calendar years;
        ``"07-01"``: July to June, a southern-hemisphere growing season).

    Returns
    -------
    pandas.DataFrame
        One row per record (same index): ``year`` (int, the calendar year in which
        the record's budget year starts), ``period_start`` and ``period_end`` (the
        first day of that budget year and the first day of the next).

    Raises
    ------
    ConfigError
        `year_start` is not a valid ``"MM-DD"`` day (29 February is refused: it is
        not in every year).

    Notes
    -----
    DESIGN.md §4.1 "Budget year": an interval belongs to the budget year in which
    it starts, as a day belongs to the date on which its intervals start.

    Examples
    --------
    >>> index = pd.DatetimeIndex(["2021-06-30 23:30", "2021-07-01 00:00"])
    >>> budget_years(index, "07-01")["year"].tolist()
    [2020, 2021]
    """
    month, day = _month_day(year_start)
    index = pd.DatetimeIndex(index)
    years = budget_year_numbers(index, year_start)
    starts = pd.to_datetime({"year": years, "month": month, "day": day})
    ends = pd.to_datetime({"year": years + 1, "month": month, "day": day})
    return pd.DataFrame({"year": years, "period_start": starts.to_numpy(),
                         "period_end": ends.to_numpy()}, index=index)


def budget_year_numbers(index, year_start: str = "01-01") -> np.ndarray:
    """The ``year`` column of :func:`budget_years` alone, without the period bounds.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts in local standard time.
    year_start : str
        First day of the budget year as ``"MM-DD"``.

    Returns
    -------
    numpy.ndarray of int64
        For each interval start, the calendar year in which its budget year starts.

    Raises
    ------
    ConfigError
        `year_start` is not a valid ``"MM-DD"`` day.
    """
    month, day = _month_day(year_start)
    index = pd.DatetimeIndex(index)
    before = (index.month < month) | ((index.month == month) & (index.day < day))
    return np.asarray(index.year, dtype=np.int64) - before.astype(np.int64)


def budget_year_edges(index, interval_minutes: int, year_start: str = "01-01",
                      edge_days: float = 1.0) -> tuple[pd.DatetimeIndex, list]:
    """The record's interval starts fitted to its budget years, and what was changed.

    A file cut by the dates of its stamps does not hold whole budget years where its
    stamps mark interval ends (00:00 on 1 January closes the last interval of the year
    before, and the last interval of the year is stamped on the next day) or where the
    logger started or stopped within a day of the year's turn. Such a year's budget
    would be partial for a few records, and the fragment before or after it a budget
    year of its own. Here:

    - a budget year at either end of a record of several budget years that holds fewer
      than one day of records (a fragment) is left out, where another year keeps a
      day or more;
    - a budget year whose only absent records are at its edges, at most `edge_days`
      of them, gets those records as stamps of their own (gaps, filled like any other
      gap), so it is complete.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Regular interval starts in local standard time.
    interval_minutes : int
        Record interval [min].
    year_start : str, optional
        First day of the budget year, ``"MM-DD"`` (:func:`budget_years`).
    edge_days : float, optional
        Largest span of records at a year's edges added as gaps [days]; default one day
        (our choice: a day is the span of the fragment left out, and a day of gaps at
        the year's turn is filled from the days beside it like any other gap).

    Returns
    -------
    index : pandas.DatetimeIndex
        The interval starts to process, named ``"time"`` (`index` itself where
        nothing changes).
    notes : list of str
        One sentence per fragment left out and per year completed at its edges, for the
        run's warnings; empty where nothing changes.
    """
    index = pd.DatetimeIndex(index)
    if len(index) == 0:
        return index, []
    step = pd.Timedelta(minutes=interval_minutes)
    per_day = 1440 // int(interval_minutes)
    table = budget_years(index, year_start)
    years = table["year"].to_numpy()
    label = ("{}" if year_start == "01-01" else "budget year {}")
    counts = pd.Series(years).value_counts()
    notes = []
    keep = np.ones(len(index), dtype=bool)
    whole = counts[counts >= per_day]
    if len(counts) > 1 and not whole.empty:
        first_year, last_year = int(years[0]), int(years[-1])
        causes = {first_year: "a file of stamps that mark interval ends, beginning at 00:00 "
                              f"on the first day of {label.format(first_year + 1)}, holds the "
                              f"last interval of {label.format(first_year)}",
                  last_year: "a file of stamps that mark interval starts, ending at 00:00 on "
                             f"the first day of {label.format(last_year)}, holds its first "
                             "interval"}
        for year in sorted(causes):
            if counts[year] < per_day:
                mine = years == year
                keep &= ~mine
                first, last = index[mine][0], index[mine][-1]
                notes.append(
                    f"{label.format(year)}: only {int(counts[year])} record(s) "
                    f"({first:%Y-%m-%d %H:%M} .. {last:%Y-%m-%d %H:%M}, interval starts), less "
                    "than a day: left out of the run and not budgeted (e.g. "
                    f"{causes[year]})")
    kept, kept_table = index[keep], table[keep]
    start, end = kept[0], kept[-1]
    first_year = kept_table.iloc[0]
    last_year = kept_table.iloc[-1]
    before = int((start - first_year["period_start"]) / step)
    after = int((last_year["period_end"] - step - end) / step)
    if first_year["year"] == last_year["year"]:
        add_before = add_after = before + after <= edge_days * per_day
    else:
        add_before, add_after = before <= edge_days * per_day, after <= edge_days * per_day
    # the added stamps keep the records' place on the clock: starts off the grid of whole
    # intervals (a logger on UTC at a site 5.75 h from it) stay off it
    if add_before and before > 0:
        start = start - before * step
        notes.append(_edge_note(label.format(first_year["year"]), start, before, step,
                                "start"))
    if add_after and after > 0:
        end = end + after * step
        notes.append(_edge_note(label.format(last_year["year"]), end - (after - 1) * step,
                                after, step, "end"))
    if not notes:
        return index, []
    return pd.date_range(start, end, freq=step, name="time"), notes


def _edge_note(year: str, first, count: int, step, edge: str) -> str:
    last = first + (count - 1) * step
    cause = (" (e.g. a file of stamps that mark interval ends, ending on the year's last day, "
             "lacks its last interval)" if edge == "end" else "")
    return (f"{year}: {count} record(s) at its {edge} ({first:%Y-%m-%d %H:%M} .. "
            f"{last:%Y-%m-%d %H:%M}, interval starts) are not in the input: added as gaps and "
            f"filled like any other, so the year is complete{cause}")


def _month_day(year_start) -> tuple[int, int]:
    match = re.fullmatch(r"(\d{2})-(\d{2})", year_start) if isinstance(year_start, str) else None
    if match:
        month, day = int(match[1]), int(match[2])
        try:
            datetime(2021, month, day)  # a year without 29 February
            return month, day
        except ValueError:
            pass
    raise ConfigError(f"[processing] year_start = {setting_text(year_start)} is not allowed: "
                      "expected a day of the year as "
                      "\"MM-DD\", e.g. \"07-01\" (29 February is not in every year)")

