"""The measurement site: name, location and canopy height class."""

from __future__ import annotations

import math
import re
from dataclasses import asdict, dataclass

from .errors import ConfigError

__all__ = ["CANOPIES", "FRACTIONAL_UTC_OFFSETS", "Site"]

#: Canopy height classes of ``[site] canopy``.
CANOPIES = ("short", "tall")

#: Standard-time UTC offsets in use that are not whole hours [h] (Marquesas -9.5,
#: Newfoundland -3.5, Iran 3.5, Afghanistan 4.5, India 5.5, Nepal 5.75, Myanmar 6.5,
#: Eucla 8.75, Central Australia 9.5, Lord Howe 10.5, Chatham Islands 12.75; the time
#: zones of the IANA tz database, common knowledge (m)). Every other standard offset is
#: a whole number of hours from -12 to 14.
FRACTIONAL_UTC_OFFSETS = frozenset({-9.5, -3.5, 3.5, 4.5, 5.5, 5.75, 6.5, 8.75, 9.5, 10.5,
                                    12.75})
_UTC_OFFSETS = tuple(sorted(set(float(hour) for hour in range(-12, 15))
                            | FRACTIONAL_UTC_OFFSETS))


@dataclass(frozen=True)
class Site:
    """A flux-tower site.

    Parameters
    ----------
    name : str
        Site name, free text.
    latitude : float
        Geographic latitude, north positive [degrees], within [-90, 90].
    longitude : float
        Geographic longitude, east positive [degrees], within [-180, 180].
    utc_offset : float
        Offset of the record's local standard time from UTC [hours], within
        [-12, 14]; e.g. 1.0 for Central European standard time. A whole number of
        hours or one of :data:`FRACTIONAL_UTC_OFFSETS` (5.5 for India): an offset no
        time zone uses (1.3, or 5.3 for 5 h 30 min) is refused.
    canopy : {"tall", "short"}
        Height class of the vegetation around the tower: ``"tall"`` (forest,
        default) or ``"short"`` (crops, grass, shrubs of a metre or two). It sets
        the floor of the detected u* threshold (:data:`fluxpart.ustar.CANOPY_FLOORS`):
        a short canopy keeps little CO2 in the air below the sensor, and its
        thresholds are often below the 0.1 m s-1 floor used for forests. The
        default keeps the higher floor, which rejects more calm nights rather than
        fewer.

    Raises
    ------
    ConfigError
        If a value is missing, not a number or out of range; the message names
        the ``[site]`` setting.
    """

    name: str
    latitude: float
    longitude: float
    utc_offset: float = 0.0
    canopy: str = "tall"

    def __post_init__(self):
        from .config import setting_text
        units = {"latitude": "degrees north (negative = south)",
                 "longitude": "degrees east (negative = west)",
                 "utc_offset": "hours from UTC of the file's local standard time"}
        for key, low, high in (("latitude", -90.0, 90.0), ("longitude", -180.0, 180.0),
                               ("utc_offset", -12.0, 14.0)):
            value = getattr(self, key)
            if type(value).__module__ == "numpy" and getattr(value, "shape", None) == ():
                value = value.item()
            shown = setting_text(value)
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise ConfigError(f"[site] {key} = {shown} is not a number: expected a number "
                                  f"from {low:g} to {high:g}, in {units[key]}"
                                  + (", written without quotes" if isinstance(value, str)
                                     else "")
                                  + (_offset_text_hint(value) if key == "utc_offset"
                                     and isinstance(value, str) else ""))
            if not math.isfinite(value) or not low <= value <= high:
                raise ConfigError(f"[site] {key} = {shown} is out of range: expected a value "
                                  f"from {low:g} to {high:g}, in {units[key]}")
            object.__setattr__(self, key, float(value))
        _check_utc_offset(self.utc_offset)
        if not isinstance(self.canopy, str) or self.canopy not in CANOPIES:
            raise ConfigError(f"[site] canopy = {setting_text(self.canopy)} is not allowed: "
                              "expected \"short\" (crops, grass) or \"tall\" (forest)")
        if not isinstance(self.name, str) or not self.name.strip():
            raise ConfigError(f"[site] name = {setting_text(self.name)} is not allowed: expected "
                              "the site's name as non-empty text")

    def to_dict(self) -> dict:
        """Return the site as a plain dict (for the manifest)."""
        return asdict(self)


#: Names of the offset 0 written for utc_offset: UTC, GMT, UT and ISO 8601's "Z" (m).
_UTC_NAMES = ("UTC", "GMT", "UT", "Z")
#: An offset written as text: "+01:00", "-0530", "UTC+1", "GMT-5", "+5.5"
_OFFSET_TEXT = re.compile(r"\s*(?:UTC|GMT)?\s*([+\-\u2212]?)\s*(\d{1,2}(?:\.\d+)?)"
                          r"(?::?(\d{2}))?\s*", re.IGNORECASE)


def _offset_text_hint(text: str) -> str:
    """The number meant by a ``[site] utc_offset`` written as text, as a hint, else ''.

    A newcomer writes the offset as a clock shows it ("+01:00", "UTC+1") or gives the
    zone's name ("Europe/Berlin"); both name one number (round newuser57). A zone's
    standard offset is the smaller of its clock's offsets in January and July of the
    current year (the IANA tz database through Python's ``zoneinfo``): summer time
    advances the clock. "UTC", "GMT", "UT" and "Z" name 0 (review95).

    References
    ----------
    ISO 8601-1:2019, section 4.3.13: a UTC offset written as ±hh:mm or ±hhmm (m).
    """
    if text.strip().upper() in _UTC_NAMES:
        # review95: "UTC", "GMT" and ISO 8601's "Z" name the offset 0, and got no hint
        return "; write it as hours: utc_offset = 0.0"
    found = _OFFSET_TEXT.fullmatch(text)
    if found:
        hours = float(found[2]) + (float(found[3]) / 60.0 if found[3] else 0.0)
        hours = -hours if found[1] in "-\u2212" and found[1] else hours
        if not any(abs(hours - used) < 1e-9 for used in _UTC_OFFSETS):
            return (f"; it reads as {_hours_text(hours)} h, which no time zone uses as its "
                    "standard time")
        return f"; write it as hours: utc_offset = {_hours_text(hours)}"
    if "/" not in text:
        return ""
    import datetime
    import zoneinfo

    try:
        zone = zoneinfo.ZoneInfo(text.strip())
    except (ValueError, zoneinfo.ZoneInfoNotFoundError):
        return ""
    from .config import setting_text

    year = datetime.date.today().year
    offsets = [datetime.datetime(year, month, 15, 12, tzinfo=zone).utcoffset()
               for month in (1, 7)]
    # the smaller of the clock's two offsets: summer time advances the clock, so the
    # logger's clock without it is the smaller; the offset where the zone's "dst" is 0
    # named Ireland's summer clock (+1), whose tz rules write its winter GMT as a daylight
    # saving of -1 h (review95)
    hours = min(offsets).total_seconds() / 3600.0
    summer = ""
    if offsets[0] != offsets[1]:
        summer = (" (and where the file's stamps follow its summer time, also [input] "
                  f"time_zone = {setting_text(text.strip())})")
    return (f"; {setting_text(text.strip())} is a time zone, whose standard time is "
            f"UTC{hours:+g} h: utc_offset = {_hours_text(hours)}{summer}")


def _hours_text(hours: float) -> str:
    """Hours as a TOML float: 1.0, -5.5, 5.75 (0.0 for "-00:00", review95)."""
    text = f"{hours + 0.0:g}"
    return text if "." in text else text + ".0"


def _check_utc_offset(offset: float) -> None:
    """Refuse an offset [h] that no time zone uses, naming the nearest ones that are used.

    A clock set to such an offset does not exist: the value is a typing slip (1.3 for
    1.0) or hours and minutes written as a decimal (5.30 for 5 h 30 min = 5.5), and it
    would shift the sun in every record by the difference.
    """
    if any(abs(offset - used) < 1e-9 for used in _UTC_OFFSETS):
        return
    below = max(used for used in _UTC_OFFSETS if used < offset)
    above = min(used for used in _UTC_OFFSETS if used > offset)
    hours, fraction = divmod(abs(offset), 1.0)
    minutes = round(fraction * 100.0, 6)
    as_minutes = math.copysign(hours + minutes / 60.0, offset)
    hint = ""
    if minutes in (30.0, 45.0) and as_minutes in _UTC_OFFSETS:
        sign = "-" if offset < 0 else ""
        hint = (f"; hours and minutes are written as decimal hours ({sign}{int(hours)} h "
                f"{int(minutes)} min = {as_minutes:g})")
    raise ConfigError(
        f"[site] utc_offset = {offset:g} is no time zone's offset: standard time is a whole "
        f"number of hours from UTC or one of {', '.join(f'{v:g}' for v in sorted(FRACTIONAL_UTC_OFFSETS))};"
        f" the nearest are {below:g} and {above:g}{hint}")


# an unknown keyword (Site(lat=47.1, ...)) named with the setting meant, as Config's
from .config import keyword_checked  # noqa: E402  (config does not import site)

keyword_checked(Site, "Site")
