"""Time zones of tower stamps: the setting ``[input] time_zone`` and civil time.

Pure functions: the standard offset of an IANA zone (:func:`zone_standard_hours`, also
used by :mod:`fluxpart.clock`), the check of ``[input] time_zone`` against ``[site]
utc_offset`` (:func:`check_time_zone`), civil time with daylight saving turned into local
standard time (``_civil_to_standard``, the repeated autumn hour resolved by record
order), standard-time labels written beside stamps ("CET", "MESZ") read as fixed
offsets, and whether a zone keeps daylight saving in a year (``_has_daylight_saving``).
The zones come from the system's time-zone database (:mod:`zoneinfo`), imported where
used.
"""

from __future__ import annotations

import re
from datetime import datetime, timedelta

import numpy as np
import pandas as pd

from .config import setting_text
from .errors import ConfigError, TimestampError
from .stamp_hints import _time_setting, _where

__all__ = [
    "check_time_zone",
]

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


def _standard_time_labels(text: pd.Series, time_format: str) -> pd.Series:
    """Under ``%Z``, the text with the standard-time labels CET, MET, EET and WET as the
    fixed-offset zones they mean (see ``_STANDARD_TIME_LABELS``); else `text` as it is."""
    if "%Z" not in time_format:
        return text
    return text.str.replace(_STANDARD_TIME_LABEL,
                            lambda match: _STANDARD_TIME_LABELS[match[1]], regex=True)


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
