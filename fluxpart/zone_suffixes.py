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
in UTC and no local offset, so it disagrees with no zone. Suffixes of other tags
("[u-ca=...]", a calendar) are left, so that such stamps stay refused as not matching the
format (round layouts49).

References
----------
Sharma, U. & Bormann, C. (2024). Date and Time on the Internet: Timestamps with Additional
Information. RFC 9557, IETF (m). Klyne, G. & Newman, C. (2002). Date and Time on the
Internet: Timestamps. RFC 3339, IETF.
"""
from __future__ import annotations

import re
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
import pandas as pd

#: An offset (or Z) then one bracketed zone name, optionally marked critical by "!".
_SUFFIX = re.compile(r"^(?P<stamp>.*?(?:Z|[+-]\d{2}(?::?\d{2})?))\[!?(?P<zone>[A-Za-z_]"
                     r"[A-Za-z0-9_+\-]*(?:/[A-Za-z0-9_+\-]+)*)\]$")
#: The written offset of a stamp (without its suffix) [sign, hours, minutes]
_OFFSET = re.compile(r"(?P<sign>[+-])(?P<hours>\d{2}):?(?P<minutes>\d{2})?$")


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
        The cells with each ``[Area/City]`` suffix removed (`text` itself where no cell
        has one); the zone names written, sorted; and where every offset is its zone's at
        that instant ``-1, ""``, else the position of the first stamp whose offset
        disagrees with its zone, or whose zone the IANA database does not hold, and what
        is wrong. A stamp the format does not read is not compared (the reader refuses
        it as not matching the format).

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
    suffixed = parts["zone"].notna().to_numpy()
    if not suffixed.any():
        return text, [], -1, ""
    stripped = text.where(~suffixed, parts["stamp"])
    zones = sorted(set(parts.loc[suffixed, "zone"]))
    for zone in zones:
        try:
            ZoneInfo(zone)
        except (ZoneInfoNotFoundError, ValueError):
            first = int(np.flatnonzero((parts["zone"] == zone).to_numpy())[0])
            return stripped, zones, first, f"its zone [{zone}] is no time zone of the IANA database"
    offsets = stripped.str.extract(_OFFSET)
    written = offsets["sign"].notna().to_numpy() & suffixed
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
    for zone in zones:
        at = written & (parts["zone"] == zone).to_numpy() & instants.notna().to_numpy()
        if not at.any():
            continue
        utc = instants[at]
        local = utc.dt.tz_convert(ZoneInfo(zone)).dt.tz_localize(None)
        own = ((local - utc.dt.tz_localize(None)) / pd.Timedelta("1min")).to_numpy()
        wrong = own != minutes[at]
        if wrong.any():
            first = int(np.flatnonzero(at)[np.flatnonzero(wrong)[0]])
            return stripped, zones, first, (
                f"its offset {_shown(minutes[first])} is not that of its zone "
                f"[{zone}] at that instant ({_shown(own[np.flatnonzero(wrong)[0]])}); "
                f"{int(wrong.sum())} such stamp(s), so each states two times")
    return stripped, zones, -1, ""


def _shown(minutes: float) -> str:
    sign = "-" if minutes < 0 else "+"
    hours, rest = divmod(abs(int(minutes)), 60)
    return f"{sign}{hours:02d}:{rest:02d}"
