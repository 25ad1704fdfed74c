"""``[input] time_zone`` written as a shorthand no time-zone database holds.

A tower scientist names the clock as a person says it: an abbreviation ("CST", "IST",
"CEST") or a fixed offset ("UTC+1", "GMT-5", "+05:30"). Neither is a zone of the IANA
database, which the setting takes, and both were refused with the same plain words as a
misspelt city. An abbreviation names no place: "CST" is the standard time of North
America's centre, of China and of Cuba, "IST" India's, Ireland's summer and Israel's; a
summer abbreviation ("CEST", "EDT") states the offset of half the year only. A fixed
offset needs no zone at all: ``[site] utc_offset`` states it, and a zone is for a clock
that follows daylight saving (or stamps kept in UTC).

:func:`zone_shorthand_hint` says which of the two the name is, what it may stand for
against ``[site] utc_offset``, and what to write instead; the refusal itself stays that
of :func:`fluxpart.time_zones.check_time_zone`.

References
----------
IANA Time Zone Database, the file ``theory.html``: abbreviations are ambiguous and not
used as zone names (the "Area/Location" form); the offsets below, common knowledge (m).
Its file ``etcetera``: "Etc/GMT+5" is five hours behind UTC, the sign inverted (m).

IEEE Std 1003.1 (POSIX), environment variable TZ: the offset is positive west of the
prime meridian ("EST5", "UTC+5" five hours behind UTC) (m).
"""

from __future__ import annotations

import re

__all__ = ["ABBREVIATIONS", "zone_shorthand_hint"]

#: Clock abbreviations in wide use that the IANA database has no zone of, with the UTC
#: offsets [h] and the clocks each stands for (common knowledge (m); "EST", "MST",
#: "HST", "CET", "EET", "WET" and "MET" are zones there and are read as such).
ABBREVIATIONS = {
    "CST": ((-6.0, "North America's Central standard time"), (8.0, "China standard time"),
            (-5.0, "Cuba standard time")),
    "CDT": ((-5.0, "North America's Central summer time"), (-4.0, "Cuba summer time")),
    "IST": ((5.5, "India standard time"), (1.0, "Ireland's summer time"),
            (2.0, "Israel standard time")),
    "BST": ((1.0, "British summer time"), (6.0, "Bangladesh standard time")),
    "AST": ((-4.0, "Atlantic standard time"), (3.0, "Arabia standard time")),
    "PST": ((-8.0, "North America's Pacific standard time"),
            (8.0, "Philippine standard time")),
    "EDT": ((-4.0, "North America's Eastern summer time"),),
    "MDT": ((-6.0, "North America's Mountain summer time"),),
    "PDT": ((-7.0, "North America's Pacific summer time"),),
    "AKST": ((-9.0, "Alaska standard time"),),
    "CEST": ((2.0, "Central European summer time"),),
    "EEST": ((3.0, "Eastern European summer time"),),
    "WEST": ((1.0, "Western European summer time"),),
    "MSK": ((3.0, "Moscow time"),),
    "WAT": ((1.0, "West Africa time"),),
    "CAT": ((2.0, "Central Africa time"),),
    "EAT": ((3.0, "East Africa time"),),
    "SAST": ((2.0, "South Africa standard time"),),
    "PKT": ((5.0, "Pakistan standard time"),),
    "ICT": ((7.0, "Indochina time"),),
    "WIB": ((7.0, "Western Indonesia time"),),
    "SGT": ((8.0, "Singapore time"),),
    "HKT": ((8.0, "Hong Kong time"),),
    "AWST": ((8.0, "Australian Western standard time"),),
    "JST": ((9.0, "Japan standard time"),),
    "KST": ((9.0, "Korea standard time"),),
    "ACST": ((9.5, "Australian Central standard time"),),
    "AEST": ((10.0, "Australian Eastern standard time"),),
    "AEDT": ((11.0, "Australian Eastern summer time"),),
    "NZST": ((12.0, "New Zealand standard time"),),
    "NZDT": ((13.0, "New Zealand summer time"),),
}

#: "UTC+1", "GMT-05:00", "UTC +5:30", "+01:00", "-0500": a fixed offset from UTC
_FIXED_OFFSET = re.compile(r"^(?:UTC|GMT|Z)?\s*([+-])\s*(\d{1,2})(?:[:.h]?(\d{2}))?$",
                           re.IGNORECASE)


def _offset_text(hours: float) -> str:
    """An offset [h] as a person writes it: "UTC+1", "UTC-5", "UTC+5.5"."""
    return f"UTC{hours:+g}"


def zone_shorthand_hint(name: str, utc_offset: float) -> str:
    """What an unknown ``[input] time_zone`` written as a shorthand stands for, and what
    to write instead; "" for a name that is neither an abbreviation nor an offset.

    Parameters
    ----------
    name : str
        The ``[input] time_zone`` as written.
    utc_offset : float
        ``[site] utc_offset``, the offset of the file's local standard time [h].

    Returns
    -------
    str
        A clause to append to the refusal ("; ..."), or "".

    References
    ----------
    IANA Time Zone Database, ``theory.html`` (abbreviations are no zone names) (m).
    """
    text = name.strip()
    site = f"[site] utc_offset = {float(utc_offset):g}"
    fixed = _FIXED_OFFSET.match(text)
    if fixed and any(c.isdigit() for c in text):
        sign, hours, minutes = fixed.groups()
        offset = (int(hours) + int(minutes or 0) / 60.0) * (-1 if sign == "-" else 1)
        if offset == 0:
            return ("; it is UTC itself: for stamps kept in UTC write time_zone = \"UTC\"")
        if abs(offset - float(utc_offset)) < 1e-9:
            keep = f"leave time_zone out, as {site} states it"
        elif abs(offset + float(utc_offset)) < 1e-9:
            # POSIX TZ strings and the database's Etc/GMT names count hours west of
            # Greenwich: "GMT+5" there is UTC-5, the offset [site] states (review80)
            etc = (f" or the database's \"Etc/GMT{offset:+g}\"" if offset == int(offset)
                   else "")
            said, posix = _offset_text(offset), _offset_text(-offset)
            return (f"; it is a fixed offset, not a zone: {said} as a person says it, but "
                    f"{posix} as a POSIX TZ string{etc} counts it (hours west of "
                    f"Greenwich), the offset {site} states: for a clock kept at {posix} all "
                    f"year leave time_zone out; for one at {said} set [site] utc_offset = "
                    f"{offset:g} and leave time_zone out; name a zone (\"Area/City\") only "
                    "for a clock that follows daylight saving")
        else:
            keep = (f"set [site] utc_offset = {offset:g} (now {float(utc_offset):g}) and leave "
                    "time_zone out")
        return (f"; it is a fixed offset ({_offset_text(offset)}), not a zone: for a clock "
                f"kept at {_offset_text(offset)} all year {keep}; name a zone "
                "(\"Area/City\") only for a clock that follows daylight saving")
    meanings = ABBREVIATIONS.get(text.upper())
    if not meanings:
        return ""
    stands = " or ".join(f"{_offset_text(hours)} ({what})" for hours, what in meanings)
    summer = [hours for hours, what in meanings if "summer" in what]
    advice = ("a summer abbreviation states half the year's offset only; " if summer
              and len(summer) == len(meanings) else "")
    return (f"; {text} is an abbreviation, not a zone, and names no place: it stands for "
            f"{stands}; {advice}name the site's zone as \"Area/City\" (its daylight-saving "
            f"rules), or, for a clock on standard time all year, leave time_zone out "
            f"({site} states it)")
