"""Stamps of RFC 9557's extended form: a UTC offset followed by a time zone in brackets.

"2021-07-01T00:30+02:00[Europe/Berlin]" is the Internet Extended Date/Time Format (IXDTF,
RFC 9557, 2024): an RFC 3339 stamp whose offset places the instant, followed by a suffix
naming the IANA time zone it was written in (Java's ``ZonedDateTime`` and JavaScript's
Temporal write it so). The offset alone fixes the instant; the zone adds no time. The
suffix is read past where the offset of every stamp is the zone's at that instant (the
reader then converts by the offsets, as for any stamp that carries one, with a note);
where they differ (a logger writing the winter offset all year beside its zone name), the
file states two times for one record and is refused, naming the stamp and both offsets
(RFC 9557 section 3.4 leaves such an inconsistency to the application, an error where the
suffix is marked critical, "[!Europe/Berlin]"). A "Z" before the suffix states the instant
in UTC and no local offset, so it disagrees with no zone (round layouts49), and so does
"-00:00" (RFC 3339's unknown local offset; review74). A zone name
written in another case ("[europe/berlin]") names the one IANA zone it matches without
case, and a UTC offset in brackets ("[+01:00]", RFC 9557's numeric zone) a fixed offset,
compared with the stamp's as a name's is (leftovers56: both were refused, the first as an
unknown zone, the second as not matching the format). Any other suffix (a tag such as
"[u-ca=iso8601]", a calendar, or a second suffix) is refused naming it.

References
----------
Sharma, U. & Bormann, C. (2024). Date and Time on the Internet: Timestamps with Additional
Information. RFC 9557, IETF (m). Klyne, G. & Newman, C. (2002). Date and Time on the
Internet: Timestamps. RFC 3339, IETF.
"""
from __future__ import annotations

import re
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError, available_timezones

import numpy as np
import pandas as pd

#: An offset (or Z) then one or more bracketed suffixes.
_SUFFIX = re.compile(r"^(?P<stamp>.*?(?:Z|[+-]\d{2}(?::?\d{2})?))(?P<suffix>(?:\[[^\[\]]*\])+)$")
#: One suffix naming a zone: an IANA name, optionally marked critical by "!".
_ZONE_NAME = re.compile(r"^\[!?(?P<zone>[A-Za-z_][A-Za-z0-9_+\-]*(?:/[A-Za-z0-9_+\-]+)*)\]$")
#: One suffix naming a numeric offset ("[+01:00]", RFC 9557's time-numoffset).
_ZONE_OFFSET = re.compile(r"^\[!?(?P<sign>[+-])(?P<hours>\d{2}):?(?P<minutes>\d{2})\]$")
#: The written offset of a stamp (without its suffix) [sign, hours, minutes]
_OFFSET = re.compile(r"(?P<sign>[+-])(?P<hours>\d{2}):?(?P<minutes>\d{2})?$")


def _iana_zone(name: str) -> str | None:
    """The IANA zone `name` names, its case aside, or None.

    The tz database keeps no two names that differ only in case (its theory file: some
    systems compare names without case (m)), so a name written in another case names one
    zone; a name matching none, or (should the database ever hold them) two, names none.
    """
    try:
        ZoneInfo(name)
        return name
    except (ZoneInfoNotFoundError, ValueError):
        pass
    matches = [zone for zone in available_timezones() if zone.lower() == name.lower()]
    return matches[0] if len(matches) == 1 else None


def _read_suffix(suffix: str):
    """A written suffix as ``(label, zone, minutes, problem)``: the zone's label for the
    note, an IANA zone name or None, a fixed offset [min] or None, and what is wrong."""
    numeric = _ZONE_OFFSET.match(suffix)
    if numeric and (int(numeric["hours"]) > 23 or int(numeric["minutes"]) > 59):
        # RFC 3339's time-hour 00-23 and time-minute 00-59 (RFC 9557 takes its offset
        # from there): "[+02:99]" read as +03:39 (review74)
        return suffix, None, None, (
            f"its suffix {suffix} is no UTC offset (hours 00-23, minutes 00-59); write the "
            "offset the stamp states, or leave the suffix out")
    if numeric:
        minutes = (int(numeric["hours"]) * 60 + int(numeric["minutes"])) \
            * (-1 if numeric["sign"] == "-" else 1)
        return _shown(minutes), None, minutes, ""
    named = _ZONE_NAME.match(suffix)
    if not named:
        return suffix, None, None, (
            f"its suffix {suffix} is not one time zone (an IANA name or a UTC offset in "
            "brackets), and other suffixes are not read; leave the suffix out")
    zone = _iana_zone(named["zone"])
    if zone is None:
        return suffix, None, None, (f"its zone [{named['zone']}] is no time zone of the "
                                    "IANA database; write its IANA name, or leave the zone "
                                    "in brackets out")
    label = zone if zone == named["zone"] else f"{named['zone']}, the IANA zone {zone}"
    return label, zone, None, ""


def zone_suffixes(text: pd.Series, time_format: str = "ISO8601"
                  ) -> tuple[pd.Series, list, int, str]:
    """Stamp text without RFC 9557 zone suffixes, the zones named, and any disagreement.

    Parameters
    ----------
    text : pandas.Series of str
        One file's stamp cells, read under an ISO 8601 format with offsets.
    time_format : str
        ``[input] time_format``: "ISO8601" or a strptime format ending in ``%z``
        ("%d.%m.%Y %H:%M%z"), under which the stamps are read to their instants to be
        compared with their zones (review70: read as ISO 8601 only, a stamp of another
        order was not compared, its offset taken as the zone's).

    Returns
    -------
    tuple of (pandas.Series, list of str, int, str)
        The cells with each suffix removed (`text` itself where no cell has one); the
        zones named, sorted (an IANA name, one written in another case with the name it
        matches, or an offset "+01:00"); and where every offset is its zone's at that
        instant ``-1, ""``, else the position of the first stamp whose offset disagrees
        with its zone, whose zone the IANA database does not hold, or whose suffix is no
        zone, and what is wrong with its remedy. A stamp the format does not read is not
        compared (the reader refuses it as not matching the format).

    Examples
    --------
    >>> cells = pd.Series(["2021-01-01T00:30+01:00[Europe/Berlin]",
    ...                    "2021-07-01T00:30+02:00[Europe/Berlin]"])
    >>> stripped, zones, at, problem = zone_suffixes(cells)
    >>> list(stripped), zones, at, problem
    (['2021-01-01T00:30+01:00', '2021-07-01T00:30+02:00'], ['Europe/Berlin'], -1, '')
    """
    if not text.str.endswith("]").any():         # one C pass: most files stop here
        return text, [], -1, ""
    parts = text.str.extract(_SUFFIX)
    suffixed = parts["suffix"].notna().to_numpy()
    if not suffixed.any():
        return text, [], -1, ""
    stripped = text.where(~suffixed, parts["stamp"])
    read = {suffix: _read_suffix(suffix) for suffix in sorted(set(parts.loc[suffixed, "suffix"]))}
    zones = sorted({label for label, _, _, _ in read.values()})
    for suffix, (_, _, _, problem) in read.items():
        if problem:
            first = int(np.flatnonzero((parts["suffix"] == suffix).to_numpy())[0])
            return stripped, zones, first, problem
    offsets = stripped.str.extract(_OFFSET)
    # "-00:00" states the instant in UTC and no local offset, as "Z" does (RFC 3339
    # section 4.3, which RFC 9557 section 2 makes Z's meaning too): compared with no zone
    # (review74: "-00:00[Europe/London]" in summer was refused as two times)
    unknown = ((offsets["sign"] == "-")
               & (pd.to_numeric(offsets["hours"], errors="coerce") == 0)
               & (pd.to_numeric(offsets["minutes"], errors="coerce").fillna(0) == 0))
    written = offsets["sign"].notna().to_numpy() & ~unknown.to_numpy() & suffixed
    if not written.any():
        return stripped, zones, -1, ""            # "Z" before every suffix: UTC stated
    sign = np.where(offsets["sign"] == "-", -1, 1)
    minutes = sign * (pd.to_numeric(offsets["hours"], errors="coerce").to_numpy() * 60
                      + pd.to_numeric(offsets["minutes"], errors="coerce").fillna(0).to_numpy())
    instants = pd.to_datetime(stripped.where(written), format="ISO8601", utc=True,
                              errors="coerce")
    if time_format.upper() != "ISO8601":
        instants = pd.to_datetime(stripped.where(written), format=time_format, utc=True,
                                  errors="coerce").fillna(instants)
    for suffix, (label, zone, fixed, _) in read.items():
        at = written & (parts["suffix"] == suffix).to_numpy() & instants.notna().to_numpy()
        if not at.any():
            continue
        if zone is None:                          # a fixed offset: the same at every instant
            own = np.full(int(at.sum()), float(fixed))
        else:
            utc = instants[at]
            local = utc.dt.tz_convert(ZoneInfo(zone)).dt.tz_localize(None)
            own = ((local - utc.dt.tz_localize(None)) / pd.Timedelta("1min")).to_numpy()
        wrong = own != minutes[at]
        if wrong.any():
            first = int(np.flatnonzero(at)[np.flatnonzero(wrong)[0]])
            return stripped, zones, first, (
                f"its offset {_shown(minutes[first])} is not that of its zone "
                f"[{label}] at that instant ({_shown(own[np.flatnonzero(wrong)[0]])}); "
                f"{int(wrong.sum())} such stamp(s), so each states two times; write each "
                "stamp's offset as its zone has it, or leave the zone in brackets out")
    return stripped, zones, -1, ""


def _shown(minutes: float) -> str:
    sign = "-" if minutes < 0 else "+"
    hours, rest = divmod(abs(int(minutes)), 60)
    return f"{sign}{hours:02d}:{rest:02d}"
