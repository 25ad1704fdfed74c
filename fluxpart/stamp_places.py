"""Where the stamps sit in their interval and on which clock, as the file itself says it.

``[input] time_marks`` (start, middle or end of the averaging interval) and the clock of
the stamps (the site's local standard time, unless ``time_zone`` or a UTC offset in the
stamps says otherwise) move every record: read at the wrong place, each record sits half
or a whole interval early or late, the night mask and the light response follow, and the
budget moves by several g C m-2 (an hour of UTC read as local time moves it further). The
values rarely tell. But a file often says it: the time column is named for its place in
the interval ("period_start", "TimeEnd") or for its clock ("timestamp_utc"); a file
writes both the start and the end stamp of each record; middle stamps fall half an
interval off the clock grid. Where what the file says and what the settings say differ,
two readings are possible and the reader refuses, naming both, instead of guessing.

Pure functions; each returns a message (one line) or None.

References
----------
ISO 8601-1:2019. Date and time -- Representations for information interchange -- Part 1:
Basic rules. International Organization for Standardization (UTC written "Z" or as an
offset, "+01:00") (m).

Aubinet, M., Vesala, T. and Papale, D. (eds.) (2012). Eddy Covariance: A Practical Guide
to Measurement and Data Analysis. Springer (fluxes are averages over intervals of 30 or 60
minutes, each labelled with one time stamp) (m).
"""

from __future__ import annotations

import re
import unicodedata
from datetime import datetime

import numpy as np
import pandas as pd

from .config import setting_text
from .counted_time import counted_form

__all__ = ["ZONE_ABBREVIATIONS", "column_place", "column_utc_offset", "half_interval_message",
           "date_only_repeats_hint", "name_conflict_message", "paired_stamps_message",
           "ends_in_utc_z", "format_clock", "parse_like", "repeated_stamp_hint",
           "spelled_zone_offset", "stated_civil", "stated_offset", "stated_place",
           "text_conflict_message", "zone_offset"]


class _LazyPattern:
    """A regular expression compiled where it is first used, not at import.

    Most files use three or four of this module's two dozen patterns (the others read
    the lines above a header and the cells of a units line), and compiling them all
    took ~10 ms of every command's start-up (round speed20). Attribute access
    (``search``, ``finditer``, ...) goes to the compiled pattern, the same object
    ``re.compile`` returns.
    """

    __slots__ = ("_arguments", "_compiled")

    def __init__(self, *arguments):
        self._arguments = arguments
        self._compiled = None

    def __getattr__(self, name):
        if self._compiled is None:
            self._compiled = re.compile(*self._arguments)
        return getattr(self._compiled, name)


#: Words of a time column's name that say where its stamps sit in the interval (English,
#: with the German words loggers of German-speaking networks write; common practice).
_PLACE_WORDS = {
    "start": {"start", "starts", "starting", "begin", "begins", "beginning", "anfang",
              "beginn", "debut", "inicio", "comienzo", "inizio"},
    "middle": {"mid", "middle", "midpoint", "centre", "center", "mitte", "milieu", "medio",
               "mitad"},
    "end": {"end", "ends", "ending", "stop", "finish", "ende", "fin", "final"},
}
#: (French, Spanish and Italian words since layouts27: "horodatage_debut",
#: "fecha_hora_final"; a column's accents are read without them, "début" as "debut")
#: Words a place word is written together with in one token ("endtime", "timestart")
_TIME_WORDS = ("timestamp", "datetime", "stamp", "time", "date", "ts")
#: (not the zone names "Etc/GMT-1", whose POSIX sign is the other way round: UTC+1)
_UTC = _LazyPattern(r"(?<![a-z])(?<!etc/)(utc|gmt)(?:([+-])(\d{1,2})(?::?(\d{2}))?)?(?![a-z0-9])")


def _tokens(name: str) -> list[str]:
    """Lower-case words of a column name, split at case changes, digits and punctuation."""
    plain = "".join(ch for ch in unicodedata.normalize("NFKD", name)
                    if not unicodedata.combining(ch))          # "début" -> "debut"
    spaced = re.sub(r"([A-Z]+)([A-Z][a-z])", r"\1 \2", plain)
    spaced = re.sub(r"([a-z])([A-Z])", r"\1 \2", spaced)
    return re.findall(r"[a-z]+|\d+", spaced.lower())


def column_place(name: str) -> str | None:
    """The place in the interval a time column's name states.

    Parameters
    ----------
    name : str
        Column name, e.g. ``"period_start"``, ``"TimeEnd"``, ``"t_begin"``.

    Returns
    -------
    str or None
        ``"start"``, ``"middle"`` or ``"end"`` where the name's words say exactly one of
        them (alone or written with a time word: ``"endtime"``), else None.

    References
    ----------
    Common practice: exports that write the interval's two stamps name them for its
    start and its end.
    """
    found = set()
    for token in _tokens(name):
        for place, words in _PLACE_WORDS.items():
            if token in words or any(token in (word + time, time + word)
                                     for word in words for time in _TIME_WORDS):
                found.add(place)
    return found.pop() if len(found) == 1 else None


def column_utc_offset(name: str) -> float | None:
    """The UTC offset a time column's name states [hours], or None.

    Parameters
    ----------
    name : str
        Column name, e.g. ``"timestamp_utc"`` (0), ``"Time (UTC+1)"`` (1),
        ``"DateTimeGMT"`` (0).

    Returns
    -------
    float or None
        The offset [h] of the clock the name gives: ``UTC`` or ``GMT`` alone is 0, with
        a signed offset (``UTC+1``, ``UTC-05:00``, ``GMT+0530``) that offset; None where
        the name states no clock.

    References
    ----------
    ISO 8601-1:2019 (offsets from UTC as ``±hh``, ``±hhmm``, ``±hh:mm``) (m).
    """
    spaced = re.sub(r"([A-Z]+)([A-Z][a-z])", r"\1 \2", name)
    spaced = re.sub(r"([a-z])([A-Z])", r"\1 \2", spaced).lower().replace("\u2212", "-")
    spaced = re.sub(r"\s*([+-])\s*", r"\1", spaced)
    found = {(m.group(2) or "", m.group(3) or "0", m.group(4) or "0")
             for m in _UTC.finditer(spaced)}
    if len(found) != 1:
        return None
    sign, hours, minutes = found.pop()
    offset = int(hours) + int(minutes) / 60
    return -offset if sign == "-" else float(offset)


#: Zone abbreviations that name one fixed offset [h] each, as the time-zone database
#: defines them (IANA tz database, files "europe", "northamerica", "asia",
#: "australasia", "africa" (m)), with the German names of the European ones (MEZ =
#: CET, OEZ = EET, WEZ = WET and their summer times, Einheiten- und Zeitgesetz § 4 (m)).
#: Left out: abbreviations of two zones (CST: China or US Central; IST: India, Ireland
#: or Israel; BST: British Summer or Bangladesh; AST: Atlantic or Arabia) and MET, also
#: the short form of "meteorological" in column names and titles.
ZONE_ABBREVIATIONS = {
    "CET": 1.0, "MEZ": 1.0, "CEST": 2.0, "MESZ": 2.0, "MEST": 2.0,
    "EET": 2.0, "OEZ": 2.0, "EEST": 3.0, "OESZ": 3.0,
    "WET": 0.0, "WEZ": 0.0, "WEST": 1.0, "WESZ": 1.0, "MSK": 3.0,
    "EST": -5.0, "EDT": -4.0, "CDT": -5.0, "MST": -7.0, "MDT": -6.0, "PST": -8.0,
    "PDT": -7.0, "AKST": -9.0, "AKDT": -8.0, "HST": -10.0,
    "JST": 9.0, "KST": 9.0, "HKT": 8.0, "SGT": 8.0, "WIB": 7.0,
    "AEST": 10.0, "AEDT": 11.0, "ACST": 9.5, "ACDT": 10.5, "AWST": 8.0,
    "NZST": 12.0, "NZDT": 13.0, "SAST": 2.0,
}
_ABBREVIATION = _LazyPattern(r"(?<![A-Za-z])([A-Z]{3,4})(?![A-Za-z])")
_AREA_CITY = _LazyPattern(r"(?<![\w/])((?:Africa|America|Antarctica|Asia|Atlantic|Australia|"
                          r"Europe|Indian|Pacific|Etc)/[A-Za-z_+\-0-9]+(?:/[A-Za-z_\-]+)?)")


def zone_offset(text: str) -> float | None:
    """The standard UTC offset a zone abbreviation or zone name in a text states [hours].

    Parameters
    ----------
    text : str
        Text as written (case kept), e.g. ``"EET"``, ``"Zeit (MEZ)"``,
        ``"timezone: Europe/London"``.

    Returns
    -------
    float or None
        The offset [h]: a listed abbreviation's fixed offset (``ZONE_ABBREVIATIONS``;
        upper case only, so the words "est" or "wet" are not read), or a time-zone
        database name's standard time (the smaller of its January and July offsets:
        daylight saving puts clocks ahead, also in the southern hemisphere); None
        where the text names none, or several with different offsets.

    References
    ----------
    IANA time zone database (zone names "Area/City", abbreviations and their offsets;
    read through the standard library's ``zoneinfo``) (m). Daylight saving time
    advances clocks by (usually) one hour (m).
    """
    from datetime import timezone as _timezone
    from zoneinfo import ZoneInfo

    found = set()
    for match in _AREA_CITY.finditer(text):
        try:
            zone = ZoneInfo(match.group(1))
        except (ValueError, OSError, KeyError):         # not a zone of the database
            continue
        offsets = [datetime(2021, month, 15, 12, tzinfo=_timezone.utc).astimezone(zone)
                   .utcoffset().total_seconds() / 3600.0 for month in (1, 7)]
        found.add(min(offsets))
    if not found:
        found = {ZONE_ABBREVIATIONS[m.group(1)] for m in _ABBREVIATION.finditer(text)
                 if m.group(1) in ZONE_ABBREVIATIONS}
    return found.pop() if len(found) == 1 else None


def spelled_zone_offset(text: str) -> float | None:
    """The standard UTC offset of a zone written out in words in a text [hours], or None.

    Parameters
    ----------
    text : str
        Text, e.g. ``"All times in Coordinated Universal Time"`` (0),
        ``"TimeZone=W. Europe Standard Time"`` (1), ``"Eastern Standard Time"`` (-5).

    Returns
    -------
    float or None
        The offset [h] of the zone named (``_SPELLED_ZONES``); None where none is named,
        or several with different offsets.

    References
    ----------
    IANA time zone database (standard times of the zones) and Unicode CLDR's mapping of
    Windows zone identifiers (m).
    """
    offsets = dict(_SPELLED_ZONES)
    found = {offsets[m.group(1)] for m in _SPELLED.finditer(text.lower())}
    return found.pop() if len(found) == 1 else None


def _hours(offset: float) -> str:
    return f"UTC{offset:+g}" if offset else "UTC"


_STATED_PLACE = _LazyPattern(
    r"\b(start|beginning|begin|end|middle|centre|center|mid-?point)\s+of\s+(?:the\s+|each\s+)?"
    r"(?:averaging\s+|measurement\s+|sampling\s+|logging\s+|record(?:ing)?\s+)?"
    r"(?:interval|period|window)")
#: German statements of the place (common practice of German-speaking networks):
#: "Intervallanfang", "Ende des Mittelungsintervalls"
_GERMAN_PLACE = _LazyPattern(
    r"\b(?:mittelungs|mess)?intervall(anfang|beginn|ende|mitte)\b"
    r"|\b(anfang|beginn|ende|mitte)\s+des\s+(?:mittelungs|mess)?(?:zeit)?"
    r"(?:intervall|zeitraum)e?s\b")
#: Statements of the place in the languages of other networks' exports (French,
#: Spanish, Italian: "Horodatage en fin de période", "inicio del intervalo", "fine del
#: periodo di media"; common practice, since layouts27); not where a colon and a number
#: follow ("fin de la période : 2021-12-31" dates the record)
_ROMANCE_PLACE = _LazyPattern(
    r"(?:\b(début|debut|fin|milieu|centre)\s+(?:de\s+(?:la\s+|l')?|du\s+)"
    r"(?:période|periode|intervalle)\b"
    r"|\b(inicio|comienzo|principio|final|fin|mitad|medio)\s+del\s+(?:periodo|período|intervalo)\b"
    r"|\b(inizio|fine|metà|meta)\s+del(?:l'\s*|\s+)(?:periodo|intervallo)\b)"
    r"(?!\s*(?:de\s+\w+\s*)?[:=]\s*\d)")
#: Averages over the interval after or before the stamp ("Values are averages over
#: the following 30 minutes": the stamp starts the interval; "Mittelwerte der
#: vorangegangenen 30 Minuten": it ends it) (common practice, since layouts27)
_RELATIVE_PLACE = _LazyPattern(
    r"\b(?:averages?|averaged|means?|mean\s+values?|values?|totals?|sums?)\s+"
    r"(?:over|of|for|across)\s+(?:the\s+)?"
    r"(following|next|subsequent|preceding|previous)\s+"
    r"(?:\d+|thirty|sixty|half(?:\s+an?)?)?[\s-]*(?:min(?:ute)?s?|hours?|h)\b"
    r"|\bmittelwerte?\s+(?:der|über\s+die)\s+(folgenden|nächsten|vorangegangenen|"
    r"vorhergehenden|vorherigen|letzten)\s+(?:\d+\s*)?(?:min(?:uten)?|stunden?)\b")
#: "Period-ending timestamps", "the period ending at the time shown" (since layouts27;
#: "Calibration period ending 2021-05-01" states nothing: no word for the stamps or
#: the time follows)
_ENDING_AT = _LazyPattern(
    r"\b(?:period|interval)[\s-]+(beginning|starting|ending|begin|start|end)\s+"
    r"(?:time\s*stamps?|timestamps?|stamps?|time\s*labels?|labels?|times?)\b"
    r"|\b(?:period|interval)\s+(beginning|starting|ending)\s+(?:at|with)\s+"
    r"(?:the\s+|that\s+|this\s+|each\s+|its\s+)?"
    r"(?:time\s*stamps?|timestamps?|stamps?|time|label)\b"
    # the "hour ending" convention ("Half-hour ending", "interval-ending"), with no date
    # after it ("hour ending 2021-06-01 13:00" names one record)
    r"|\b(?:half[\s-]*)?hour[\s-]+(ending|beginning|starting)\b(?![^;]*\d{4})"
    r"|\b(?:interval|period)-(ending|beginning|starting)\b(?![^;]*\d{4})"
    r"|\b(?:time\s*stamps?|timestamps?|stamps?|time\s*labels?)\b[^.;]{0,30}?"
    r"\b(mid)[\s-]*(?:interval|period)\b")
#: The place phrased around the stamps rather than named beside "interval" (layouts36:
#: each left unread, so that a file stating start stamps was read an interval late under
#: time_marks = "end"): stamps "labelled with the start time", "stamped at the end"; the
#: averages "ending at the time shown", the 30 minutes "preceding the time stamp" or
#: "after the timestamp" (a duration after "the", "each", "its" or "a" before the word,
#: and no change of the stamps after it, so that "values before the timestamp change",
#: "gaps of 30 min before the timestamp change" and "30 min before the timestamp of each
#: reboot" state nothing, nor a window of another length than a record's, 30 or 60 min,
#: "the 3 h after the time stamp" of a despiking window, nor the end "of a" calibration
#: run a record is "marked by": review47); the "left edge" of the averaging window; the
#: period that "closes" (a word for the stamps before it), the time "at which the period
#: ends" ("interval starts" alone may be a plural: "stamps shifted to interval
#: starts" tells a conversion); stamps "centred on the averaging period" or at
#: "interval midpoints". No date may follow ("period ends 2021-12-31" dates an event).
_PHRASED_PLACE = _LazyPattern(
    r"(?:\b(?:labell?ed|stamped|marked|dated|indexed)\s+(?:with|at|by)\s+(?:the\s+|its\s+)?"
    r"(start|beginning|begin|end|middle|centre|center|midpoint)\b(?!\s+of\s+an?\b)"
    r"|\b(ending|beginning|starting|centred|centered)\s+(?:at|on)\s+(?:the\s+)?"
    r"(?:time\s+(?:shown|given|written|listed)|time\s*stamps?|timestamps?|stamps?)\b"
    r"|\b(?:the|each|its|a)\s+(?:(?:30|60|1|one)[\s-]*)?(?:half[\s-]+)?"
    r"(?:min(?:ute)?s?|hours?|h|interval|period)\s+(?:immediately\s+)?"
    r"(preceding|following|before|after|prior\s+to|up\s+to)\s+(?:the\s+|each\s+|its\s+)?"
    r"(?:time\s*stamps?|timestamps?|stamps?|time\s+(?:shown|given|label))\b"
    r"(?!\s+(?:changes?|changed|shifts?|shifted|jumps?|corrections?|corrected|resets?"
    r"|errors?|drift))"
    r"|\b(left|right)[\s-]+(?:edge|side|bound)\s+of\s+(?:the\s+|each\s+)?"
    r"(?:averaging\s+)?(?:window|interval|period)\b"
    r"|\b(?:time\s*stamps?|timestamps?|stamps?)\b[^.;]{0,40}?\b(?:interval|period|window)"
    r"\s+(closes|opens)\b"
    r"|\b(?:at\s+which|when)\s+(?:the|each|its)\s+(?:averaging\s+)?"
    r"(?:interval|period|window)\s+(ends|starts|closes|opens|begins)\b"
    r"|\b(?:time\s*stamps?|timestamps?|stamps?)\b[^.;]{0,20}?\b(centred|centered)\s+(?:on|in)\b"
    r"|\b(?:interval|period)\s+(midpoints?|mid-points?|centres|centers)\b)"
    r"(?![^;]*\d{4})")
#: The place in an interval named by its length: "Date/time: start of 30-min block",
#: "end of each 30 min average", "start of the half-hour period" (layouts37: a "block" of a
#: stated length was left unread); a length or "averaging" before the noun, no date after.
_LENGTH_PLACE = _LazyPattern(
    r"\b(start|beginning|begin|end|middle|centre|center|midpoint)\s+of\s+(?:the\s+|each\s+)?"
    r"(?:\d+[\s-]*(?:min(?:ute)?s?|h|hrs?|hours?)|half[\s-]*hour(?:ly)?|hourly|averaging)"
    r"[\s-]+(?:block|interval|period|window|average|mean)s?\b(?![^;]*\d{4})")
_OTHER_PLACE_WORDS = {
    "début": "start", "debut": "start", "inicio": "start", "comienzo": "start",
    "principio": "start", "inizio": "start", "fin": "end", "final": "end", "fine": "end",
    "milieu": "middle", "centre": "middle", "mitad": "middle", "medio": "middle",
    "metà": "middle", "meta": "middle", "following": "start", "next": "start",
    "subsequent": "start", "folgenden": "start", "nächsten": "start",
    "preceding": "end", "previous": "end", "vorangegangenen": "end",
    "vorhergehenden": "end", "vorherigen": "end", "letzten": "end",
    "beginning": "start", "starting": "start", "begin": "start", "start": "start",
    "ending": "end", "end": "end", "mid": "middle",
    # phrased around the stamps (_PHRASED_PLACE, layouts36)
    "middle": "middle", "center": "middle", "midpoint": "middle", "centred": "middle",
    "centered": "middle", "before": "end", "prior to": "end", "up to": "end",
    "after": "start", "left": "start", "right": "end", "closes": "end", "ends": "end",
    "opens": "start", "begins": "start", "starts": "start", "midpoints": "middle",
    "mid-points": "middle", "mid-point": "middle", "centres": "middle", "centers": "middle",
}
#: A place word within a few words after a word for the stamps, in one clause
#: ("Timestamp at start of each 30-min average", "Time label: interval start")
_STAMP_PLACE = _LazyPattern(
    r"\b(?:time\s*stamps?|timestamps?|stamps?|time\s*labels?|zeitstempel)\b[^.;]{0,30}?"
    r"(?<![a-z])(start|beginning|begin|end|middle|centre|center|midpoint|anfang|beginn|ende"
    r"|mitte)(?![a-z])")
#: "interval begin", "period end" in a cell under the time column's name
_CELL_PLACE = _LazyPattern(r"\b(?:interval|period|averaging|window)\s+"
                           r"(start|beginning|begin|end|middle|centre|center|midpoint)\b"
                           r"|\((start|beginning|begin|end|middle|centre|center|midpoint)\)"
                           r"|^\s*(start|beginning|begin|end|middle|centre|center|midpoint)\s*$")
#: A clock right after a word for the stamps ("Timestamps (UTC)", "Timestamps are UTC",
#: "All data in UTC", "Date/time: UTC", "Local time = UTC+2"): no digits between, so a
#: date written before a clock ("Exported 2021-06-01 12:00 UTC") is not one
_STAMPS_CLOCK = _LazyPattern(
    r"\b(?:time\s*stamps?|timestamps?|stamps?|date\s*/\s*time|date\s*time|datetime|"
    r"date\s*(?:&|and)\s*time|"
    r"local\s+time|all\s+data|all\s+times|times|zeitstempel|horodatage)\b[^0-9.;]{0,15}?"
    r"(?<![a-z])(utc|gmt)(\s*[+-]\s*\d{1,2}(?::?\d{2})?)?(?![a-z0-9])")
#: A key of the zone or offset, then its value. Besides English and German, the words
#: for "time zone" of the languages of other tower networks' logger exports (French,
#: Spanish, Italian, Portuguese, Dutch, Polish, Swedish, Norwegian; common practice,
#: since layouts27: "Fuseau horaire : UTC" was read as local standard time); a unit in
#: brackets after the key ("UTC offset (h): 2", "UTC offset [min]: 60") gives the unit of
#: a bare number.
_ZONE_KEY = _LazyPattern(r"(?:time[\s_-]*zone(?:[\s_-]*offset)?|zeitzone|\btz\b|utc[\s_-]*offset"
                         r"|gmt[\s_-]*offset|offset\s+(?:from|to)\s+(?:utc|gmt)|fuseau\s+horaire"
                         r"|zona\s+horaria|huso\s+horario|fuso\s+orario|fuso\s+hor[aá]rio"
                         r"|tijd\s*s?zone|strefa\s+czasowa|tidszon|tidssone"
                         r"|(?P<unit_key>hours?|minutes?)\s+(?:from|to|relative\s+to)\s+(?:utc|gmt))"
                         # "UTC offset of the stamps: +2 h" (layouts36)
                         r"(?:\s+of\s+(?:the\s+)?(?:time\s*stamps?|timestamps?|stamps?|times|clock"
                         r"|logger|data))?"
                         # "utc_offset_minutes = 120" (layouts35)
                         r"(?:[\s_-]*(?P<unit_word>hours|hrs|minutes|mins)\b)?"
                         r"(?:\s*[\(\[](?:utc|gmt)[\s_-]*offset[\)\]])?"   # "Time zone (UTC offset)"
                         # "(h)", "[min]", "(hours from UTC)" (layouts35: read as UTC before)
                         r"(?:\s*[\(\[](?P<unit>h|hrs?|hours?|min|mins|minutes?)"
                         r"(?:\s+(?:from|to|relative\s+to)\s+(?:utc|gmt))?[\)\]])?"
                         r"\s*[\]\)]?\s*[:=,;]?\s*\(?\s*(?P<value>[^,;]*)")
#: "1 h ahead of UTC", "5 hours behind GMT": an offset written in words (layouts35: such a
#: value was read as UTC, the clock it is counted from)
#: "Stamps are 2 h ahead of UTC": a word for the stamps or the clock, then an offset in
#: words (layouts36: read only after a zone key before)
_STAMPS_AHEAD = _LazyPattern(r"\b(?:time\s*stamps?|timestamps?|stamps?|times|clock|logger)\b"
                             r"[^.;0-9]{0,20}?(?=\d)")
#: Words of a clock's error rather than its zone ("the logger was 5 min behind GMT until
#: March", "clock drift: 3 min ahead of UTC, corrected"): such a line states no zone of the
#: stamps (review47: read as UTC-00:05 and the honest file refused). Every zone's offset
#: is a whole number of quarter hours (IANA tz: +05:45, +12:45 the finest (m)).
_CLOCK_ERROR = _LazyPattern(r"\b(?:was|were|had\s+been|until|drift\w*|corrected|fast|slow"
                            r"|lag(?:s|ged|ging)?|error)\b")
_RELATIVE_OFFSET = _LazyPattern(r"(\d{1,2}(?:\.\d+)?)\s*(h|hrs?|hours?|min|mins|minutes?)?\s+"
                                r"(ahead\s+of|behind|east\s+of|west\s+of)\s+(?:utc|gmt)")
#: "Logger clock offset: UTC+02:00", "clock_offset = +0200": a clock's offset key, read
#: only where its value is a clock or an offset of a zone's form (hours with :00, :30 or
#: :45), since "clock offset: +12 s" or "-00:03" is a clock's drift (layouts35)
_CLOCK_OFFSET_KEY = _LazyPattern(r"\bclock[\s_-]*offset\s*[:=]\s*(?P<value>[^,;]*)")
_COUNTED_FROM = _LazyPattern(r"\d\s*(?:h|hrs?|hours?|min|mins|minutes?)?\s+(?:from|to|ahead|"
                             r"behind|before|after|east|west|relative)\b")
_ZONE_FORM_OFFSET = _LazyPattern(r"^([+-])(\d{2}):?(00|30|45)$")
#: "Logger clock set to UTC+2" (not "synchronised to", which may name the clock's source
#: only)
_CLOCK_SET = _LazyPattern(r"\b(?:clock|logger|datalogger)\s+(?:is\s+)?(?:set|kept|running|runs)"
                          r"\s+(?:to|on|in)\s+"
                          r"(utc|gmt)(\s*[+-]\s*\d{1,2}(?::?\d{2})?)?(?![a-z0-9])")
#: "Time offset: +1 h" (a key read only with a unit or a sign and "UTC": "time offset:
#: 0.2" may be a sensor's lag)
_TIME_OFFSET_KEY = _LazyPattern(r"\btime[\s_-]*offset\s*[:=]\s*(?P<value>[^,;]*)")
#: A number of hours, or of hours or minutes with its unit ("1", "+1 h", "60 min"), as
#: written after an offset key
_NUMBER_UNIT = _LazyPattern(r"([+-]?\d{1,3}(?:\.\d+)?)\s*(h|hrs?|hours?|min|mins|minutes?)?")
#: The whole value after a key being one clock: UTC, GMT, GPS time (which loggers
#: synchronised by a GPS receiver keep: UTC plus the leap seconds since 1980, 18 s since
#: 2017, IS-GPS-200 (m), within the reader's rounding to whole minutes) or the military
#: and aviation letter Z ("Zulu") of UTC (ISO 8601 writes UTC as Z (m)), or Universal
#: Time (UT, French TU), within a second of UTC (m), with an optional ISO 8601 offset
_CLOCK_VALUE = _LazyPattern(r"(?:utc|gmt|gps|z|zulu|ut|tu|universal)(?:\s*time)?"
                            r"(?:\s*\((?:utc|gmt|gps)\))?"
                            r"(?P<offset>\s*[+-]\s*\d{1,2}(?::?\d{2})?)?"
                            r"(?:\s*(?:h|hrs?|hours?)\b)?")     # "UTC + 2 h" (layouts36)
#: "Data logger time: UTC", "Time: UTC+00:00", "Standard time: UTC": a key ending in
#: "time" followed by a clock and nothing else (since layouts27; a date or anything else
#: after the key states nothing: "Export time: 2021-06-01 12:00 UTC")
#: German keys too (layouts37: "Uhrzeit: MEZ" was left unread): "Uhrzeit", "Zeit"
#: ("clock time", "time"; Duden (m)).
_TIME_KEY = _LazyPattern(r"(?:\btime|\buhrzeit|\bzeit)\s*[\]\)]?\s*[:=]\s*\(?\s*"
                         r"(?P<value>[^,;]*)")
_IN_UTC = _LazyPattern(r"\b(?:times?|time\s*stamps?|timestamps?|stamps?|clock|dates?|zeitangaben"
                       r"|data|values|records|readings"   # "All values in UTC+2" (layouts35)
                       r"|recorded|logged"                # "Recorded in UTC+2" (layouts36)
                       r"|zeiten|uhrzeiten|horodatage|heures?)\b[^.;]{0,24}?"
                       r"\b(?:in|en)\s+(utc|gmt)(\s*[+-]\s*\d{1,2}(?::?\d{2})?)?"
                       r"(?![a-z0-9]|-[a-z])")     # not "data in GMT-based format"
#: A clock that is the stamps' source or an event's, not theirs: "Data in UTC converted
#: to CET", "converted from UTC", "Date and time of export (UTC): ..." (review44: each
#: refused as stamps in UTC); a conversion counts only after the clock ("Timestamps
#: converted to UTC" states it)
_CONVERTED = _LazyPattern(r"(?<!\bnot )(?<!\bno )\b(?:conver|transformed\b|(?:shifted|changed)"
                          r"\s+(?:in)?to\b)")
_FROM_CLOCK = _LazyPattern(r"\bfrom\s+(?:utc|gmt)\b")
_EVENT_TIME = _LazyPattern(r"\bof\s+(?:the\s+)?(?:file\s+)?(?:export|creation|download"
                           r"|processing|writing|upload)")
#: "Time reference: UTC", "Timebase: UTC", "Time standard = GMT" (a clock or zone follows;
#: bare numbers are not read, since "time base: 10" may be a sampling rate)
_REFERENCE_KEY = _LazyPattern(r"(?:\btime[\s_-]*(?:reference|base|basis|standard)|\btimebase"
                              r"|\bzeitbasis|\bzeitreferenz)\s*[\]\)]?\s*[:=]\s*\(?\s*([^,;]*)")
#: Zones written out in words, as logger software, Windows (its zone identifiers, "W.
#: Europe Standard Time" for Berlin) and data documentation write them [h]; the longer
#: phrase first, so "Australian Eastern Standard Time" is not read as US Eastern.
#: Offsets: the zones' standard times in the IANA time zone database and the Windows
#: zone identifiers of the Unicode CLDR mapping (m).
_SPELLED_ZONES = (
    ("australian eastern standard time", 10.0), ("aus eastern standard time", 10.0),
    ("australian central standard time", 9.5), ("australian western standard time", 8.0),
    ("us eastern standard time", -5.0), ("coordinated universal time", 0.0),
    ("universal time coordinated", 0.0), ("greenwich mean time", 0.0),
    ("western european summer time", 1.0), ("western european time", 0.0),
    ("western european standard time", 0.0), ("central european summer time", 2.0),
    ("central european time", 1.0), ("central european standard time", 1.0),
    ("central europe standard time", 1.0), ("middle european time", 1.0),
    ("w. europe standard time", 1.0), ("romance standard time", 1.0),
    ("eastern european summer time", 3.0), ("eastern european time", 2.0),
    ("eastern european standard time", 2.0), ("e. europe standard time", 2.0),
    ("fle standard time", 2.0), ("gtb standard time", 2.0),
    ("mitteleuropäische sommerzeit", 2.0), ("mitteleuropäische zeit", 1.0),
    ("osteuropäische zeit", 2.0), ("westeuropäische zeit", 0.0),
    ("moscow standard time", 3.0), ("russian standard time", 3.0),
    ("eastern standard time", -5.0), ("eastern daylight time", -4.0),
    ("central standard time", -6.0), ("central daylight time", -5.0),
    ("mountain standard time", -7.0), ("mountain daylight time", -6.0),
    ("pacific standard time", -8.0), ("pacific daylight time", -7.0),
    ("alaskan standard time", -9.0), ("alaska standard time", -9.0),
    ("hawaiian standard time", -10.0), ("hawaii standard time", -10.0),
    ("japan standard time", 9.0), ("tokyo standard time", 9.0),
    ("korea standard time", 9.0), ("china standard time", 8.0),
    ("india standard time", 5.5), ("indian standard time", 5.5),
    ("new zealand standard time", 12.0), ("south africa standard time", 2.0),
    ("zulu time", 0.0),
)
_SPELLED = _LazyPattern(r"(?<![a-z])(" + "|".join(re.escape(p) for p, _ in _SPELLED_ZONES)
                        + r")(?![a-z])")
#: Words for the stamps or the clock beside a zone written out on a line without a key
_ABOUT_STAMPS = _LazyPattern(r"\b(?:times?|time\s*stamps?|timestamps?|stamps?|clock|dates?|"
                             r"zeit|zeiten|zeitstempel|uhrzeit)\b")
#: "Logger clock: EST", "clock = UTC+1" (a colon or equals sign: "clock synchronised to
#: UTC" names the clock only in passing, not the stamps')
_CLOCK_KEY = _LazyPattern(r"\bclock\s*[\]\)]?\s*[:=]\s*\(?\s*([^,;]*)")
_BARE_OFFSET = _LazyPattern(r"^([+-])(\d{1,2})(?::?(\d{2}))?$")


def stated_place(text: str, cell: bool = False) -> str | None:
    """The place in the interval a line of text states ("end of the averaging period").

    Parameters
    ----------
    text : str
        A line above the header, or a cell under the time column's name.
    cell : bool
        True for a cell under the time column's name, which speaks of the stamps, so
        "interval begin" or "period end" there states a place; on a line above the
        header such words may date the record ("Period start: 2021-01-01").

    Returns
    -------
    str or None
        ``"start"``, ``"middle"`` or ``"end"`` where the text states exactly one, else None.

    References
    ----------
    Common practice: logger and export headers state the place of the stamp in words.
    """
    places = {"beginning": "start", "begin": "start", "centre": "middle",
              "center": "middle", "midpoint": "middle", "mid-point": "middle",
              "anfang": "start", "beginn": "start", "ende": "end", "mitte": "middle"}
    lowered = text.lower()
    # "end-of-period" written with hyphens reads as "end of period"
    spaced = re.sub(r"(?<=[a-z])-(?=(?:of|the|each|averaging|measurement|sampling|logging|"
                    r"record|recording|interval|period|window)\b)|(?<=\bof)-", " ", lowered)
    found = {places.get(m.group(1), m.group(1)) for m in _STATED_PLACE.finditer(spaced)}
    found |= {places[m.group(1) or m.group(2)] for m in _GERMAN_PLACE.finditer(lowered)}
    for stamp in _STAMP_PLACE.finditer(lowered):          # "Timestamp at start of ..."
        found.add(places.get(stamp.group(1), stamp.group(1)))
    for pattern in (_ROMANCE_PLACE, _RELATIVE_PLACE, _ENDING_AT, _PHRASED_PLACE,
                    _LENGTH_PLACE):
        for m in pattern.finditer(lowered):                 # since layouts27 (36)
            word = re.sub(r"\s+", " ", next(group for group in m.groups() if group))
            found.add(_OTHER_PLACE_WORDS.get(word, word))
    if cell:                                              # a units cell "interval begin"
        for m in _CELL_PLACE.finditer(spaced):
            word = m.group(1) or m.group(2) or m.group(3)
            found.add(places.get(word, word))
    elif not found:
        found |= _line_place(spaced, places)
    return found.pop() if len(found) == 1 else None


#: A line above the header that is nothing but a statement of the stamps' place: an
#: optional key about the stamps ("Time:", "Time convention:", "Timestamps ="), optional
#: words for the interval ("averaging", "measurement" ...), "interval" or "period" (or
#: "averaging") and the place, optionally "time" or "stamp(s)" after it, and nothing else
#: (comment marks, quotes, empty cells and a closing full stop aside). A sentence that uses the words
#: in passing ("NEE before the campaign period start was removed", "Calibration period
#: end") states no place of the stamps (round review31).
_LINE_PLACE = _LazyPattern(
    r"(?:(?:(?:time|times|time\s*stamps?|timestamps?|stamps?|date\s*/\s*time|datetime)"
    r"(?:\s+(?:convention|reference|label|labels|mark|marks|position|place))?"
    r"|convention)\s*[:=]\s*"
    # "Data stamped at period end", "Times are interval start", "Logged at interval end"
    r"|(?:(?:data|values|records|times?|time\s*stamps?|timestamps?|stamps?)\s+)?"
    r"(?:is|are|stamped|logged|recorded|labell?ed|marked)\s+(?:at\s+)?(?:the\s+)?)?"
    r"(?:(?:averaging|measurement|sampling|logging|record|recording)\s+)*"
    r"(?:interval|period|averaging)\s+"
    r"(start|beginning|begin|end|middle|centre|center|midpoint)"
    r"(?:\s+(?:time|times|time\s*stamps?|timestamps?|stamps?))?")


#: A line that is a key of the stamps' place and its value, nothing else:
#: "timestamp_position = start", "Stamp position: end", "TIMESTAMP convention: interval
#: ending" (layouts36: unread before)
_KEY_PLACE = _LazyPattern(
    r"(?:time[\s_-]*stamps?|timestamps?|stamps?|time[\s_-]*labels?)"
    r"(?:[\s_-]*(?:position|place|convention|reference|mark|location|alignment))?"
    r"\s*[:=]\s*(?:(?:averaging[\s_-]+)?(?:interval|period)[\s_-]+)?"
    r"(start|beginning|begin|end|ending|starting|middle|centre|center|midpoint)")


def _line_place(spaced: str, places: dict) -> set:
    """The place a line above the header states as "period start" or "interval end".

    Such a line is a statement of the stamps' place ("Period start", "Time: interval
    end", "Time convention: averaging period start", "Period start time") only where it
    says nothing else (:data:`_LINE_PLACE`, the whole line): a key followed by a value
    ("Period start: 2021-01-01", "Period start =") or a date after the words ("Period
    start 2021-01-01 00:00") dates the record instead, a line naming another place word
    too ("period start and end in UTC") is left unread, and so is a sentence that uses
    the words in passing ("NEE before the campaign period start was removed",
    "Calibration period end"): round review31 found such a note line refusing a file
    whose time_marks were right. Before round review30 every such line was left unread,
    and a file stating "Period start" over its start stamps was read one interval early
    under time_marks = "end".
    """
    # comment marks, quotes and a spreadsheet's empty cells ("Period start,,,,") aside
    line = spaced.strip(" \t#;,/*!%'\"").rstrip(".").strip(" \t#;,/*!%'\"")
    match = _LINE_PLACE.fullmatch(line) or _KEY_PLACE.fullmatch(line)
    if match is None:
        return set()
    word = match.group(1)
    return {places.get(word, _OTHER_PLACE_WORDS.get(word, word))}


def stated_offset(text: str) -> float | None:
    """The UTC offset a line of text states for the stamps [hours], or None.

    Parameters
    ----------
    text : str
        A line above the header ("Time zone: UTC+1", "timezone = +02:00", "times in
        UTC"), or a cell under the time column's name ("UTC", "UTC+1").

    Returns
    -------
    float or None
        The offset [h]; None where the text states none or several.

    References
    ----------
    ISO 8601-1:2019 (offsets from UTC as ``±hh``, ``±hhmm``, ``±hh:mm``) (m).
    """
    # quotes aside: a spreadsheet's key and value cells '"Timezone","UTC"' (layouts27)
    original = text.replace("\u2212", "-").replace('"', "").strip()
    lowered = original.lower()
    key = _CLOCK_OFFSET_KEY.search(lowered)
    if key:                                   # "Logger clock offset: UTC+02:00" (layouts35)
        value = key.group("value").strip().strip('"\'').strip()
        zone_form = _ZONE_FORM_OFFSET.match(value.replace(" ", ""))
        if zone_form:
            sign, hours, minutes = zone_form.groups()
            offset = int(hours) + int(minutes) / 60
            return -offset if sign == "-" else float(offset)
        return _clock_value(value)
    key = _CLOCK_SET.search(lowered)
    if key:                                   # "Logger clock set to UTC+2" (layouts35)
        return column_utc_offset(key.group(1) + (key.group(2) or "").replace(" ", ""))
    key = _CLOCK_KEY.search(lowered) or _REFERENCE_KEY.search(lowered)
    if key and not _ZONE_KEY.search(lowered):
        # "Logger clock: EST", "Time reference: UTC": a clock or zone, not bare hours
        value = key.group(1).strip().strip('"\'').strip()
        offset = _value_clock(value)
        if offset is None and len(lowered) == len(original):
            offset = zone_offset(original[key.start(1):key.end(1)])
        if offset is None:
            offset = _clock_value(value)              # "Logger clock: GPS" (layouts27)
        return offset if offset is not None else spelled_zone_offset(value)
    key = _ZONE_KEY.search(lowered)
    if key:
        value = key.group("value").strip().strip('"\'').strip()
        unit = key.group("unit") or key.group("unit_word") or key.group("unit_key")
        bare = _BARE_OFFSET.match(value.replace(" ", ""))
        if bare and not unit:                 # "[min]: -330" is minutes, not -03:30
            sign, hours, minutes = bare.groups()
            offset = int(hours) + int(minutes or 0) / 60
            return -offset if sign == "-" else float(offset)
        number = _number_offset(value, unit)   # "1", "+1 h", "[min]: 60"
        if number is not None:
            return number
        offset = _value_clock(value)
        if offset is None and len(lowered) == len(original):   # "Time zone: EET"
            offset = zone_offset(original[key.start("value"):key.end("value")])
        if offset is None:
            offset = _clock_value(value)              # "Time zone = Z" (layouts27)
        return offset if offset is not None else spelled_zone_offset(value)
    key = _TIME_OFFSET_KEY.search(lowered)
    if key:                                           # "Time offset: +1 h" (layouts27)
        value = key.group("value").strip()
        offset = _clock_value(value)
        if offset is None and re.search(r"[+-]|\d\s*(?:h|min)", value):
            offset = _number_offset(value, None, unit_needed=True)
        if offset is not None:
            return offset
    inside = _IN_UTC.search(lowered)
    if inside and not _source_clock(lowered, inside):
        return column_utc_offset(inside.group(1) + (inside.group(2) or "").replace(" ", ""))
    found = {column_utc_offset(m.group(1) + (m.group(2) or "").replace(" ", ""))
             for m in _STAMPS_CLOCK.finditer(lowered) if not _source_clock(lowered, m)}
    if len(found) == 1 and "synchroni" not in lowered:   # not "clock synchronised to UTC"
        return found.pop()
    for key in _TIME_KEY.finditer(lowered):       # "Data logger time: UTC" (layouts27)
        offset = _clock_value(key.group("value").strip())
        written = original[key.start("value"):key.end("value")].strip()
        if offset is None and len(lowered) == len(original) and (
                re.fullmatch(r"\(?[A-Z]{3,4}\)?", written) or _AREA_CITY.fullmatch(written)):
            offset = zone_offset(written)         # "Logger time: CET", "Time: Europe/Helsinki"
        if offset is not None:
            return offset
    ahead = _STAMPS_AHEAD.search(lowered)
    if ahead and _RELATIVE_OFFSET.match(lowered, ahead.end()) \
            and not _CLOCK_ERROR.search(lowered):
        offset = _value_clock(lowered[ahead.end():])   # "Stamps are 2 h ahead of UTC"
        if offset is not None and np.isclose(offset * 4, round(offset * 4)):
            return offset       # a zone's offset: whole quarter hours, not a clock's drift
    spelled = spelled_zone_offset(lowered)        # "All times in Coordinated Universal Time"
    if spelled is not None and _ABOUT_STAMPS.search(_SPELLED.sub(" ", lowered)):
        return spelled                            # not a title that names a zone in passing
    if _AREA_CITY.fullmatch(original):           # a line of a zone name alone
        return zone_offset(original)
    if len(lowered) > 12:
        return None
    offset = column_utc_offset(lowered)
    if offset is None and re.fullmatch(r"\(?[A-Z]{3,4}\)?", original):    # a line "EET"
        offset = zone_offset(original)
    return offset


def _source_clock(lowered: str, match) -> bool:
    """Whether the clock of `match` in the line `lowered` is the source the stamps were
    converted from, or the time of an event (an export), not the stamps' own clock."""
    return bool(_CONVERTED.search(lowered, match.end()) or _FROM_CLOCK.search(lowered)
                or _EVENT_TIME.search(match.group(0)))


def _value_clock(value: str) -> float | None:
    """The offset [h] of the value of a zone or clock key that names UTC or GMT: written
    in words ("1 h ahead of UTC", "5 hours behind GMT"), or as ``UTC+1`` (see
    :func:`column_utc_offset`); None where a number is counted from the clock in words
    that give no direction ("2 h from UTC": not UTC). Since layouts35, which found both read as UTC.
    """
    relative = _RELATIVE_OFFSET.search(value)
    if relative:
        number, unit, direction = relative.groups()
        hours = float(number) / 60 if unit and unit.startswith("min") else float(number)
        hours = -hours if direction.startswith(("behind", "west")) else hours
        return hours if abs(hours) <= 14 else None
    if _COUNTED_FROM.search(value.lower()):
        return None
    return column_utc_offset(value)


def _clock_value(value: str) -> float | None:
    """The offset [h] of a value that is one clock and nothing else ("UTC", "GPS",
    "Z", "UTC+00:00", "GPS time"), or None (see :data:`_CLOCK_VALUE`)."""
    match = _CLOCK_VALUE.fullmatch(value.strip().rstrip("."))
    if match is None:
        return None
    written = (match.group("offset") or "").replace(" ", "")
    if not written:
        return 0.0
    sign, hours, minutes = _BARE_OFFSET.match(written).groups()
    offset = int(hours) + int(minutes or 0) / 60
    return -offset if sign == "-" else float(offset)


def _number_offset(value: str, unit: str | None, unit_needed: bool = False) -> float | None:
    """The offset [h] of a number of hours or minutes after an offset key, or None.

    ``unit`` is a unit written in brackets after the key; else a unit after the number
    counts ("+1 h", "60 min"), else hours (unless ``unit_needed``). An offset beyond
    14 h, more than any zone keeps (UTC+14, Line Islands, IANA tz (m)), is no offset.
    """
    match = _NUMBER_UNIT.fullmatch(value.strip())
    if match is None:
        return None
    number, written = match.groups()
    unit = unit or written
    if unit is None and unit_needed:
        return None
    hours = float(number) / 60 if unit and unit.startswith("min") else float(number)
    return hours if abs(hours) <= 14 else None


#: Words for daylight saving time (English, German, French, Spanish, Italian; common
#: practice) followed by an answer that it is kept, or preceded by "with"
_SUMMER_WORDS = (r"(?:daylight[\s-]*sav(?:ing|ings)?(?:[\s-]*time)?|\bdst\b|sommerzeit"
                 r"|summer[\s-]*time|heure\s+d'été|horario\s+de\s+verano|ora\s+legale)")
_SUMMER_KEPT = _LazyPattern(
    _SUMMER_WORDS + r"\s*[\]\)]?\s*[:=]\s*\(?\s*(?:yes|on|ja|true|1|oui|sí|si|enabled|"
    r"active|aktiv|applied|used)\b"
    r"|\bwith\s+" + _SUMMER_WORDS + r"|\bmit\s+sommerzeit")


def stated_civil(text: str) -> bool:
    """True where a line states stamps in civil time with daylight saving.

    Parameters
    ----------
    text : str
        A line above the header, e.g. ``"Daylight saving time: on"``, ``"Sommerzeit:
        ja"``, ``"Local time (CET/CEST)"`` (a zone's standard and summer labels side by
        side, one hour apart).

    Returns
    -------
    bool

    References
    ----------
    IANA time zone database (abbreviations and offsets of the standard and summer
    times) (m); daylight saving time advances clocks by one hour (m). Since layouts27.
    """
    lowered = text.lower()
    if _SUMMER_KEPT.search(lowered):
        return True
    for match in re.finditer(r"(?<![A-Za-z])([A-Z]{3,4})\s*/\s*([A-Z]{3,4})(?![A-Za-z])",
                             text):
        one, other = (ZONE_ABBREVIATIONS.get(match.group(i)) for i in (1, 2))
        if one is not None and other is not None and np.isclose(abs(one - other), 1.0):
            return True
    return False


def text_conflict_message(statements: list, time_marks: str, time_format: str,
                          time_zone: str | None, utc_offset: float | None) -> str | None:
    """The refusal where a line of the file states another place or clock than the settings.

    Parameters
    ----------
    statements : list of (str, str)
        ``(where, text)``: where the text is (``"line 1 of 'a.csv'"``, or ``"the cell
        under 'stamp' on line 2 of 'a.csv'"``, whose whole text is judged as a column
        name is) and the text.
    time_marks, time_format, time_zone, utc_offset
        As in :func:`name_conflict_message`.

    Returns
    -------
    str or None
        One line naming the line, what it says, what the settings read and the
        settings of both readings; None where they agree or nothing is stated.

    References
    ----------
    Aubinet, Vesala and Papale (2012) (m); ISO 8601-1:2019 (m).
    """
    for where, text in statements:
        place = stated_place(text, cell=where.startswith("the cell under"))
        if place is not None and place != time_marks:
            return (f"{where} ({text.strip()[:80]!r}) states stamps at the interval's {place}"
                    f", but time_marks = {setting_text(time_marks)} reads them as its "
                    f"{time_marks}s: the two readings place every record "
                    f"{_apart(place, time_marks)} apart; set time_marks = "
                    f"{setting_text(place)} if the file is right, or correct that line in "
                    "a copy of the file if the setting is")
    counted = stated_count_message(statements, time_format)
    if counted:
        return counted
    if _labelled(time_format) or utc_offset is None:
        return None
    for where, text in statements:
        offset = stated_offset(text)
        if offset is None and where.startswith("the cell under"):
            offset = column_utc_offset(text)      # "yyyy-mm-dd hh:mm UTC" under the stamps
            if offset is None:                    # "yyyy-mm-dd hh:mm MEZ", "EET"
                offset = zone_offset(text)
        refusal = offset is not None and _clock_refusal(
            f"{where} ({text.strip()[:80]!r}) states stamps in {_hours(offset)}", offset,
            time_zone, utc_offset, "line", "if the file is right, or correct that line in a "
            "copy of the file if the stamps are in local standard time")
        if refusal:
            return refusal
    if time_zone is None:
        for where, text in statements:
            if not where.startswith("the cell under") and stated_civil(text):
                return (f"{where} ({text.strip()[:80]!r}) states stamps in civil time with "
                        "daylight saving, but without [input] time_zone they are read as the "
                        f"site's local standard time ({_hours(utc_offset)}, [site] utc_offset"
                        f" = {utc_offset:g}) all year: the two readings place the summer "
                        "records an hour apart; set time_zone to the site's zone "
                        "(\"Area/City\") if the file is right, or correct that line in a copy "
                        "of the file if the stamps are in local standard time")
    return None


#: a count of time since a date stated in a line or cell ("Logger time: seconds since
#: 1990-01-01 00:00:00"), in the CF conventions' form that ``time_format`` reads
_STATED_COUNT = re.compile(
    # not after a number: "4 days since 2023-04-28" is a span in prose, no unit of the
    # stamps (round review99)
    r"(?<![A-Za-z])(?<!\d)(?<!\d\s)(?:days?|hours?|minutes?|seconds?|milliseconds?)\s+"
    r"since\s+\d{4}-\d{1,2}-\d{1,2}(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?"
    r"(?:\s*(?:(?:UTC|GMT)\s*[+-]\d{1,2}(?::?\d{2})?|UTC|GMT|Z|[+-]\d{1,2}(?::?\d{2})?)"
    r"(?![A-Za-z\d]))?", re.IGNORECASE)
#: "UTC+1", "GMT-05:00": the offset after the name of the clock, as the setting writes it
_NAMED_OFFSET = re.compile(r"(?:UTC|GMT)\s*(?=[+-]\d)", re.IGNORECASE)


def stated_count_message(statements: list, time_format: str) -> str | None:
    """The refusal where a line states another count of time than ``time_format`` reads.

    Parameters
    ----------
    statements : list of (str, str)
        ``(where, text)`` as in :func:`text_conflict_message`.
    time_format : str
        ``[input] time_format``: a "<unit> since <date>" count (others are not judged).

    Returns
    -------
    str or None
        Where `time_format` counts time since a date and a line states a count in the
        same form with another unit, reference or clock ("seconds since 1990-01-01", a
        logger's epoch, above counts read as Unix time: every record 20 years early, in
        2001, a year no check of the stamps refuses): one line naming the line, both
        counts and the setting that reads the stated one. None where they agree, the
        format counts nothing, or no line states a count (round layouts56).

    References
    ----------
    Eaton, B. et al. NetCDF Climate and Forecast (CF) Metadata Conventions, section 4.4:
    "<unit> since <date>" names a count's unit and reference (m).
    """
    setting = counted_form(time_format)
    if setting is None:
        return None
    for where, text in statements:
        found = _STATED_COUNT.search(text)
        if found is None:
            continue
        # "UTC+1" is the offset +1, not UTC (round review99: refused with advice to set UTC)
        written = _NAMED_OFFSET.sub("", found.group(0))
        try:
            stated = counted_form(written)
        except ValueError:          # a date that names no day: the line states nothing
            continue
        # a line silent on the clock leaves the setting's (UTC a user knows) unjudged
        if stated is None or stated[:2] == setting[:2] and stated[2] in (None, setting[2]):
            continue
        if stated[0] != setting[0]:
            apart = (f"count in units {stated[0] / setting[0]:g} times the setting's, dating "
                     "the records years apart")
        else:
            days = abs((stated[1] - setting[1]) / pd.Timedelta(days=1))
            apart = (f"date every record {days / 365.2425:.1f} years apart" if days >= 365
                     else f"date every record {days:g} days apart" if days >= 1 else
                     "place every record the two clocks' offset apart")
        return (f"{where} ({text.strip()[:80]!r}) states stamps counted as "
                f"{found.group(0)!r}, but time_format = {setting_text(time_format)} reads "
                f"them otherwise: the two readings {apart}; set time_format"
                f" = {setting_text(written)} if the file is right, or correct that "
                "line in a copy of the file if the setting is")
    return None


def _clock_refusal(said: str, offset: float, time_zone, utc_offset: float, what: str,
                   fix: str) -> str | None:
    """The refusal where a clock the file states (`said`, `offset` [h east of UTC])
    disagrees with the settings, else None: with [input] time_zone, a zone that never
    keeps `offset` (:func:`_zone_setting_conflict`, `what` the kind of statement);
    without, an offset other than ``utc_offset``, with `fix` after the setting that would
    read it."""
    if time_zone is not None:
        against = _zone_setting_conflict(offset, time_zone, utc_offset, what)
        return f"{said}, but {against}" if against else None
    if not np.isclose(offset, utc_offset):
        return (f"{said}, but without [input] time_zone {_read_as(utc_offset, offset)} "
                f"{fix}")
    return None


def _zone_setting_conflict(offset: float, time_zone: str, utc_offset: float,
                           what: str) -> str | None:
    """The second half of a refusal where the file states stamps in `offset` and
    [input] time_zone reads them in a zone that never keeps that offset; else None.

    Parameters
    ----------
    offset : float
        The offset the file states [h east of UTC].
    time_zone : str
        [input] time_zone, a time-zone database name.
    utc_offset : float
        [site] utc_offset [h].
    what : {"line", "name", "format"}
        What states the offset (for the fix).

    Returns
    -------
    str or None
        "[input] time_zone = ... reads them in ...: the two readings place every record
        N hour(s) apart; <fix>", or None where the zone keeps `offset` in January or
        July (its standard or its summer time) or is no zone of the database.

    References
    ----------
    IANA time zone database, read through the standard library's ``zoneinfo`` (m): a
    zone's offsets in January and July are its standard and its summer time.
    """
    from datetime import timezone as _timezone
    from zoneinfo import ZoneInfo

    try:
        zone = ZoneInfo(time_zone)
    except (ValueError, OSError, KeyError):
        return None
    held = sorted({datetime(2021, month, 15, 12, tzinfo=_timezone.utc).astimezone(zone)
                   .utcoffset().total_seconds() / 3600.0 for month in (1, 7)})
    if any(np.isclose(offset, hours) for hours in held):
        return None
    gaps = sorted(abs(offset - hours) for hours in held)
    apart = f"{gaps[0]:g}" if np.isclose(gaps[0], gaps[-1]) else f"{gaps[0]:g} to {gaps[-1]:g}"
    if np.isclose(offset, utc_offset):
        fix = (f"remove time_zone (stamps read as the site's local standard time, [site] "
               f"utc_offset = {utc_offset:g})")
    elif offset == 0:
        fix = 'set time_zone = "UTC"'
    else:
        fix = f"set time_zone to a zone of {_hours(offset)}"
    source = {"line": "that line", "name": "the column's name",
              "column": "that column"}.get(
        what, "time_format's text")
    return (f"[input] time_zone = {setting_text(time_zone)} reads them in "
            f"{' and '.join(_hours(hours) for hours in held)}: the two readings place every "
            f"record {apart} hour(s) apart; {fix} if the file is right, or correct "
            f"{source} in a copy of the file if the setting is")


_WHOLE_UTC = _LazyPattern(r"^(?:utc|gmt)(?:\s*([+-])\s*(\d{1,2})(?::?(\d{2}))?)?$")
_WHOLE_AREA_CITY = _LazyPattern(r"^[A-Z][A-Za-z_]+/[A-Z][A-Za-z_/+-]+$")


_CLOCK_NAME = _LazyPattern(r"tz|zone|zeit|clock|utc|gmt|time|heure|hora|fuso")


def _cell_clock(cell: str, name: str = "") -> tuple[float, bool] | None:
    """The clock one cell names as its whole text: ``(offset [h], civil)``, or None.

    ``UTC``, ``GMT`` and ``UTC+02:00`` state a fixed offset, a listed abbreviation
    (``CET``, ``CEST``) its own where the column's `name` is a clock's (``zone``,
    ``TZ``, ``time_zone``: a code such as ``EST`` under ``station`` is not read), an
    ``Area/City`` name its zone's standard offset with ``civil`` True where that zone
    keeps daylight saving."""
    from datetime import timezone as _timezone
    from zoneinfo import ZoneInfo

    text = cell.strip().replace("\u2212", "-")
    found = _WHOLE_UTC.match(text.lower())
    if found:
        sign, hours, minutes = found.group(1), found.group(2) or "0", found.group(3) or "0"
        offset = int(hours) + int(minutes) / 60
        return (-offset if sign == "-" else float(offset)), False
    if text in ZONE_ABBREVIATIONS and _CLOCK_NAME.search(name.lower()):
        return ZONE_ABBREVIATIONS[text], False
    if _WHOLE_AREA_CITY.match(text):
        try:
            zone = ZoneInfo(text)
        except (ValueError, OSError, KeyError):
            return None
        held = {datetime(2021, month, 15, 12, tzinfo=_timezone.utc).astimezone(zone)
                .utcoffset().total_seconds() / 3600.0 for month in (1, 7)}
        return min(held), len(held) > 1
    return None


_OFFSET_NAME = _LazyPattern(r"(?:utc|gmt|tz|zone)[\s_-]*offset|offset[\s_-]*(?:from[\s_-]*)?"
                            r"(?:utc|gmt)")
_MINUTES_NAME = _LazyPattern(r"\bmin(?:utes?)?\b|\[min\]|\(min\)|_min\b")


def _offset_cell(name: str, value: str) -> tuple[float, bool] | None:
    """The offset a number states under a column named for the UTC offset: hours, or
    minutes where the name says so (``utc_offset_min``) or the number is a multiple of
    15 beyond 14; None otherwise."""
    if not _OFFSET_NAME.search(name.lower()):
        return None
    try:
        number = float(value.replace("\u2212", "-"))
    except ValueError:
        return None
    if _MINUTES_NAME.search(name.lower()) or (abs(number) > 14 and number % 15 == 0):
        number = number / 60
    return (float(number), False) if abs(number) <= 14 else None


_FIRST_CELLS = 64


def _more_than_two_labels(cells) -> bool:
    """Whether `cells` hold more than two different non-blank texts (after stripping),
    as :func:`zone_column_message` counts them."""
    stripped = pd.Series(cells, dtype=object).astype(str).str.strip()
    return len(set(stripped[stripped != ""])) > 2


def zone_column_message(columns: dict, time_format: str, time_zone: str | None,
                        utc_offset: float | None, source: str) -> str | None:
    """The refusal where a column beside the stamps names their clock, against the settings.

    Some exports write the clock in a column of its own (``zone``: ``UTC`` on every
    record, or ``CET`` and ``CEST`` by season). Without this check the reader takes the
    stamps as the settings say and the column is ignored: every record an hour or more
    from its place, or the summer records an hour off.

    Parameters
    ----------
    columns : dict
        Column name -> its cells (pandas Series of str) for the columns neither read
        nor holding the stamps.
    time_format, time_zone, utc_offset
        As in :func:`name_conflict_message`.
    source : str
        The file, as named in the message.

    Returns
    -------
    str or None
        One line naming the column, the clock it states, the clock the settings read and
        the settings of both readings; None where they agree, the format reads the clock
        from the stamps, or no column holds only one or two clock labels.

    References
    ----------
    IANA time zone database (abbreviations, "Area/City" names and their offsets, read
    through the standard library's ``zoneinfo``) (m); ISO 8601-1:2019 (offsets from UTC
    as ``+hh:mm``) (m). Daylight saving time advances clocks by one hour (m).
    """
    if _labelled(time_format) or utc_offset is None:
        return None
    for name, cells in columns.items():
        # the first cells first: three different labels among them already rule the
        # column out (any part of it holding three, the whole holds three or more), so a
        # column of measurements is not turned into Python strings and sorted whole (a
        # 310 MB file of 85 such columns: 98 s of its 125 s read)
        if _more_than_two_labels(cells[:_FIRST_CELLS]):
            continue
        stripped = pd.Series(cells, dtype=object).astype(str).str.strip()
        values = sorted(stripped[stripped != ""].unique())
        if not values or len(values) > 2:
            continue
        clocks = [_cell_clock(value, name) or _offset_cell(name, value) for value in values]
        if any(clock is None for clock in clocks):
            continue
        said = " and ".join(repr(value) for value in values)
        where = f"column {name!r} of {source!r} holds only {said}"
        civil = any(is_civil for _, is_civil in clocks) or len({o for o, _ in clocks}) > 1
        if civil and time_zone is None:
            shown = " and ".join(_hours(hours) for hours in sorted({o for o, _ in clocks}))
            named = (setting_text(values[0]) if len(values) == 1 and "/" in values[0]
                     else "the site's zone (\"Area/City\")")
            return (f"{where}, which state{'s' if len(values) == 1 else ''} stamps in civil time with daylight saving "
                    f"({shown}{' in winter' if len(clocks) == 1 else ''}), but without "
                    "[input] time_zone they are read as the site's local standard time "
                    f"({_hours(utc_offset)}, [site] utc_offset = {utc_offset:g}) all year: "
                    f"the two readings place the summer records an hour apart; set "
                    f"time_zone = {named} if the column is right, "
                    "or correct that column in a copy of the file if the stamps are in "
                    "local standard time")
        for value, (offset, _) in zip(values, clocks, strict=True):
            refusal = _clock_refusal(
                f"{where}, which states stamps in {_hours(offset)} ({value!r})", offset,
                time_zone, utc_offset, "column", "if the column is right, or correct that "
                "column in a copy of the file if the stamps are in local standard time")
            if refusal:
                return refusal
    return None


def format_clock(time_format: str) -> tuple[str, float] | None:
    """The clock a strptime format writes as literal text.

    Parameters
    ----------
    time_format : str
        ``[input] time_format``, e.g. ``"%Y-%m-%d %H:%M UTC"``, ``"%d.%m.%Y %H:%M MEZ"``,
        ``"%Y-%m-%dT%H:%M+00:00"``.

    Returns
    -------
    tuple of (str, float) or None
        The text and its offset [h]; None where the format writes no clock as text or
        reads the stamps' own (``%z``, ``%Z``, the Z of UTC, ``"ISO8601"``).

    Notes
    -----
    Such text matches the stamps' clock label and drops it, so the stamps are read as
    local standard time although the format itself says they are not; it is judged as
    the time column's name is (since layouts27; before, UTC stamps were read an hour
    off at a UTC+1 site without a word).

    References
    ----------
    Python documentation, ``datetime.strptime``: characters other than directives match
    themselves (m). ISO 8601-1:2019 (offsets as ``±hh:mm``, ``±hhmm``) (m).
    """
    if _labelled(time_format):
        return None
    literal = re.sub(r"%.", " ", time_format)
    offset = column_utc_offset(literal)
    if offset is None:
        offset = zone_offset(literal)
    if offset is not None:
        words = [w for w in literal.split() if re.search(r"[A-Za-z]{2}", w)]
        return (words[-1] if words else literal.strip()), offset
    written = re.search(r"(?<![\d%])([+-])(\d{2}):?(\d{2})\s*$", time_format)
    if written and "%" not in time_format[written.start():]:
        sign, hours, minutes = written.groups()
        offset = int(hours) + int(minutes) / 60
        return written.group(0).strip(), -offset if sign == "-" else float(offset)
    return None


def _labelled(time_format: str) -> bool:
    """True where the format reads each stamp's own UTC offset or zone label, or counts
    time from a reference in a stated clock ("seconds since 1970-01-01 UTC")."""
    counted = counted_form(time_format)
    return (time_format == "ISO8601" or "%z" in time_format or "%Z" in time_format
            or ends_in_utc_z(time_format) or (counted is not None and counted[2] is not None))


def ends_in_utc_z(time_format: str) -> bool:
    """True where a strptime format ends in the literal Z of UTC ("%Y-%m-%dT%H:%M:%SZ"):
    after a directive or a character that is no letter, not the last letter of a word
    ("%d.%m.%Y %H:%M MEZ" ends in the German label of Central European Time, UTC+1;
    read as the Z of UTC before layouts27, every record moved an hour).

    Parameters
    ----------
    time_format : str
        ``[input] time_format``.

    Returns
    -------
    bool

    References
    ----------
    ISO 8601-1:2019: "Z" after a time of day marks UTC (m). Einheiten- und Zeitgesetz
    § 4: MEZ, OEZ, WEZ and their summer times MESZ, OESZ, WESZ (m).
    """
    return re.search(r"(?:%[A-Za-z]|[^A-Za-z%]|^)Z$", time_format.rstrip()) is not None


def _read_as(utc_offset: float, offset: float) -> str:
    fix = 'time_zone = "UTC"' if offset == 0 else f"[site] utc_offset = {offset:g}"
    return (f"they are read as the site's local standard time ({_hours(utc_offset)}, [site] "
            f"utc_offset = {utc_offset:g}): the two readings place every record "
            f"{abs(utc_offset - offset):g} hour(s) apart; set {fix}")


def name_conflict_message(time_columns: tuple, time_marks: str, time_format: str,
                          time_zone: str | None, utc_offset: float | None) -> str | None:
    """The refusal where a time column's name says another place or clock than the settings.

    Parameters
    ----------
    time_columns : tuple of str
        ``[input] time_column`` (one name, or the date and time columns).
    time_marks : {"start", "middle", "end"}
        ``[input] time_marks``.
    time_format : str
        ``[input] time_format``; a format that reads a UTC offset or zone label
        (``%z``, ``%Z``, ``"ISO8601"``, a literal ``Z``) takes the clock from the stamps,
        so only the place is judged.
    time_zone : str or None
        ``[input] time_zone``; where set, the clock is the user's explicit choice.
    utc_offset : float or None
        ``[site] utc_offset`` [h].

    Returns
    -------
    str or None
        One line naming the column, what its name says, what the settings read and the
        two settings that fit the two readings; None where they agree or the name says
        nothing.

    References
    ----------
    Aubinet, Vesala and Papale (2012) (m): one stamp per averaging interval, its place
    in the interval a convention of the logger or export.
    """
    for column in time_columns:
        place = column_place(column)
        if place is not None and place != time_marks:
            return (f"[input] time_column {column!r} is named for the interval's {place}, but "
                    f"time_marks = {setting_text(time_marks)} reads its stamps as the "
                    f"interval's {time_marks}s: the two readings place every record "
                    f"{_apart(place, time_marks)} apart; set time_marks = "
                    f"{setting_text(place)} if the name is right, or rename the column in a "
                    "copy of the file if the setting is")
    if _labelled(time_format) or utc_offset is None:
        return None
    written = format_clock(time_format)
    if written is not None:                       # "%Y-%m-%d %H:%M UTC" (layouts27)
        text, offset = written
        said = (f"[input] time_format {setting_text(time_format)} reads {text!r} as text, "
                f"which states stamps in {_hours(offset)}")
        refusal = _clock_refusal(said, offset, time_zone, utc_offset, "format",
                                 "if the stamps are in that clock, or remove the text from "
                                 "time_format if they are in local standard time")
        if refusal:
            return refusal
    for column in time_columns:
        offset = column_utc_offset(column)
        if offset is None:                        # "Zeit (MEZ)", "time_EET"
            offset = zone_offset(column)
        refusal = offset is not None and _clock_refusal(
            f"[input] time_column {column!r} is named for stamps in {_hours(offset)}",
            offset, time_zone, utc_offset, "name", "if the name is right, or rename the "
            "column in a copy of the file if the stamps are in local standard time")
        if refusal:
            return refusal
    return None


def _apart(one: str, other: str) -> str:
    steps = {"start": 0, "middle": 1, "end": 2}
    return "an interval" if abs(steps[one] - steps[other]) == 2 else "half an interval"


def paired_stamps_message(stamps: pd.DatetimeIndex, others: dict, time_column: str,
                          time_marks: str, source: str) -> str | None:
    """The refusal where another column holds every stamp one interval away.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        The time column's stamps of one file, as parsed (local standard time).
    others : dict
        Unmapped column name -> its cells parsed under the same format
        (``pandas.DatetimeIndex``, NaT where a cell does not parse), row by row. A
        column whose name states a clock (``"time_utc"``) holds the same stamps on
        another clock and is passed over, as are all where the time column's does.
    time_column : str
        The time column's name.
    time_marks : {"start", "middle", "end"}
        ``[input] time_marks``.
    source : str
        The file (for the message).

    Returns
    -------
    str or None
        Where 99 % or more of the rows of another column lie exactly one record step
        later (the time column holds the starts, the other the ends) or earlier (the
        time column holds the ends) and `time_marks` says otherwise: one line naming
        both columns and both settings that read them right; else None.

    References
    ----------
    Aubinet, Vesala and Papale (2012) (m): an averaging interval runs from its start
    stamp to its end stamp, one record step apart.
    """
    if len(stamps) < 3:
        return None
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    steps = steps[steps > 0]
    if not len(steps):
        return None
    minutes = float(np.median(steps))
    if column_utc_offset(time_column) is not None:
        return None
    for name, other in others.items():
        if column_utc_offset(name) is not None:     # the same stamps on another clock
            continue
        difference = np.asarray((other - stamps) / pd.Timedelta(minutes=1), dtype=float)
        valid = np.isfinite(difference)
        if valid.sum() < 0.99 * len(stamps):
            continue
        for sign, place, partner in ((1, "start", "end"), (-1, "end", "start")):
            if np.mean(difference[valid] == sign * minutes) >= 0.99 and time_marks != place:
                return (f"[input] time_column {time_column!r} with time_marks = "
                        f"{setting_text(time_marks)}: column {name!r} of {source!r} holds "
                        f"every stamp {minutes:g} minutes {'later' if sign > 0 else 'earlier'}"
                        f" (first row {other[0]} beside {stamps[0]}), so {time_column!r} "
                        f"marks the intervals' {place}s and {name!r} their {partner}s; as "
                        f"written, every record would sit {_apart(place, time_marks)} "
                        f"{'early' if _later(time_marks, place) else 'late'}: set time_marks"
                        f" = {setting_text(place)}, or map time_column = {name!r} with "
                        f"time_marks = {setting_text(partner)}"
                        + (f" (unless {name!r} holds the same stamps on a clock an hour "
                           "apart: then rename it in a copy, naming its clock)"
                           if minutes == 60 else ""))
    return None


def _later(declared: str, actual: str) -> bool:
    """True where reading `actual` stamps as `declared` moves the records earlier."""
    steps = {"start": 0, "middle": 1, "end": 2}
    return steps[declared] > steps[actual]


def parse_like(cells: pd.Series, time_format: str) -> pd.DatetimeIndex | None:
    """Cells parsed under `time_format` where the first non-empty one parses, else None
    (a column of numbers or words is no stamp column).

    Parameters
    ----------
    cells : pandas.Series
        The cells of one column of the file, as text.
    time_format : str
        ``[input] time_format``: a ``strptime`` format or ``"ISO8601"``.

    Returns
    -------
    pandas.DatetimeIndex or None
        The parsed stamps (NaT where a cell does not parse; naive, as written), or None
        where the first non-empty cell does not parse, every cell is empty, or the
        stamps carry a UTC offset (the reader's own stamps are then converted first).

    References
    ----------
    Python Software Foundation. datetime: strftime() and strptime() format codes
    (the Python standard library documentation) (m); ISO 8601-1:2019 (m).
    """
    text = cells.astype(str).str.strip()
    filled = text[text != ""]
    if not len(filled):
        return None
    try:
        if time_format == "ISO8601":
            pd.Timestamp(filled.iloc[0])
        else:
            datetime.strptime(filled.iloc[0], time_format)
    except (ValueError, TypeError):
        return None
    parsed = pd.to_datetime(text, format=time_format if time_format != "ISO8601" else "ISO8601",
                            errors="coerce")
    if getattr(parsed.dt, "tz", None) is not None:
        return None
    return pd.DatetimeIndex(parsed)


def half_interval_message(starts: pd.DatetimeIndex, interval_minutes: int,
                          time_marks: str) -> str | None:
    """The refusal where every interval start lies half an interval off the clock grid.

    Parameters
    ----------
    starts : pandas.DatetimeIndex
        Interval starts after `time_marks` was applied.
    interval_minutes : int
        Record interval [minutes].
    time_marks : {"start", "middle", "end"}
        ``[input] time_marks``.

    Returns
    -------
    str or None
        Where 99 % or more of the starts lie exactly half an interval off the grid of
        whole intervals (midnight, :30, ...): the stamps mark another place in the
        interval than `time_marks` says (middle stamps read as starts or ends, or start
        or end stamps read as middles), or a clock runs half an interval off; one line
        naming both readings. Else None (a few records off are warned elsewhere).

    References
    ----------
    Aubinet, Vesala and Papale (2012) (m): intervals of 30 or 60 minutes begin on the
    hour and half hour of the logger's clock.
    """
    if len(starts) == 0:
        return None
    offset = np.asarray((starts - starts.normalize()) / pd.Timedelta(minutes=1), dtype=float)
    half = np.mod(offset, interval_minutes) == interval_minutes / 2
    if half.mean() < 0.99:
        return None
    minute = offset[np.flatnonzero(half)[0]] % 60
    first = starts[np.flatnonzero(half)[0]]
    if time_marks == "middle":
        places = ('the interval\'s start or end: set time_marks = "start" or "end" (which '
                  "one, the file's documentation tells, or try each: `fluxpart check` then "
                  "judges the clock)")
    else:
        places = 'the middle of the interval: set time_marks = "middle"'
    return (f"[input] time_marks = {setting_text(time_marks)}: every interval then starts at "
            f"minute {minute:g} of the hour ({int(half.sum())} of {len(starts)} records, the first "
            f"at {first}), half a {interval_minutes}-minute interval off the clock grid: "
            f"either the stamps mark {places}; or the logger's clock ran "
            f"{interval_minutes / 2:g} minutes off, and then move the stamps onto the grid "
            "in a copy of the file")


def date_only_repeats_hint(stamps: pd.DatetimeIndex, text: pd.Series) -> str | None:
    """The cause where repeated stamps are each written once as a date alone.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        One file's stamps in file order, some repeated.
    text : pandas.Series of str
        The stamps as written, row by row.

    Returns
    -------
    str or None
        Where every repeated stamp is midnight and has one row written shorter than the
        file's usual stamp (the date alone, "2021-06-02", read as 00:00): daily summary
        lines among the records, one day's too (a day file of start stamps closed by
        its summary; layouts45: two days at least before, one was told "keep one of
        them"); else None.

    References
    ----------
    Common practice: a logger writes its daily table into the file of its 30-minute
    table, stamped with the date alone.
    """
    duplicated = np.asarray(stamps.duplicated(keep=False))
    if duplicated.sum() < 2:
        return None
    repeated = stamps[duplicated]
    if (repeated != repeated.normalize()).any():
        return None
    lengths = text.astype(str).str.strip().str.len().to_numpy()
    usual = float(np.median(lengths))
    short = duplicated & (lengths < usual - 2)
    days = pd.DatetimeIndex(repeated).unique()
    if short.sum() != len(days):
        return None
    first = int(np.flatnonzero(short)[0])
    return (f"each repeated stamp is midnight, written once with its time and once as the "
            f"date alone ({str(text.iloc[first]).strip()!r}), {len(days)} day(s): daily "
            "summary lines among the records (a logger's day table written into the same "
            "file)? Remove those lines in a copy of the file")


def date_only_backwards_hint(stamps: pd.DatetimeIndex, text: pd.Series,
                             backwards: np.ndarray) -> str | None:
    """The cause where each stamp that goes back in time is a date alone after records
    with a clock.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        One file's stamps in file order (no repeats).
    text : pandas.Series of str
        The stamps as written, row by row.
    backwards : numpy.ndarray of int
        Positions of the steps that go back in time.

    Returns
    -------
    str or None
        Where every stamp after a step back is midnight, written shorter than the file's
        usual stamp (the date alone, "2021-06-01", read as 00:00), and followed by a
        later stamp or by none: summary lines of the day (a daily file closed by its
        means); else None. Such a line read as a record, as sorting would, is a false
        midnight record (layouts45: named a ring memory read from its start before, whose
        fix, sorting, reads it so).

    References
    ----------
    Common practice: a logger writes its daily table into the file of its 30-minute
    table, stamped with the date alone.
    """
    rows = np.asarray(backwards) + 1
    if rows.size == 0:
        return None
    at = pd.DatetimeIndex(stamps[rows])
    if (at != at.normalize()).any():
        return None
    lengths = text.astype(str).str.strip().str.len().to_numpy()
    if not (lengths[rows] < float(np.median(lengths)) - 2).all():
        return None
    following = rows[rows + 1 < len(stamps)]
    if (stamps[following + 1] <= stamps[following]).any():
        return None
    which = ("the stamp there is" if rows.size == 1
             else f"the {rows.size} stamps that go back are each")
    return (f"{which} a date alone ({str(text.iloc[rows[0]]).strip()!r}, read as 00:00) after the "
            "records of that day: a summary line of the day (a logger's day table written "
            "into the same file, its means or totals)? Remove such lines in a copy of the "
            "file (sorting would read them as midnight records)")


def repeated_stamp_hint(stamps: pd.DatetimeIndex) -> str | None:
    """The cause of stamps that repeat within one file with other values, where the
    stamps tell it.

    Parameters
    ----------
    stamps : pandas.DatetimeIndex
        One file's stamps in file order, some repeated.

    Returns
    -------
    str or None
        For hours that never pass 12 with a quarter or more of the stamps repeated: a
        12-hour clock written without AM/PM. For one stamp written on two consecutive
        lines, every other step one record: both readings, a logger that changed from
        stamping interval ends to stamping starts there (every record after it one
        record early) and a record written twice. Else None (the caller's hint).

    References
    ----------
    Aubinet, Vesala and Papale (2012) (m): one stamp per interval, one step apart.
    Python's ``strftime``: ``%I`` is the hour of a 12-hour clock, ``%p`` its AM/PM.
    """
    duplicated = stamps.duplicated(keep=False)
    if len(stamps) >= 96 and stamps.hour.max() <= 12 and duplicated.mean() >= 0.25:
        return ("the hours never pass 12 and the stamps repeat within their day: a 12-hour "
                "clock written without AM/PM (a format of %I without %p), whose morning and "
                "afternoon records cannot be told apart; export the stamps with AM/PM or in "
                "24-hour form")
    rows = np.flatnonzero(duplicated)
    if len(rows) != 2 or rows[1] != rows[0] + 1 or len(stamps) < 4:
        return None
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    others = np.delete(steps, rows[0])
    step = float(np.median(others))
    if step <= 0 or np.mean(others == step) < 0.99:
        return None
    return (f"the stamp is written on two consecutive lines and every other stamp follows "
            f"the one before by {step:g} minutes: either the logger changed there from "
            "stamping each interval's end to stamping its start (a program or export "
            "changed), so that every record from the second line on reads one record early "
            "(then give those records the first part's convention in a copy), or it wrote "
            "one record twice (then keep one of them in a copy)")
