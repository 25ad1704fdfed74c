"""What an ``[input] time_format`` lays out: its fixed-width fields and its date part.

Pure functions over the strptime format string, shared by the stamp reader
(:mod:`fluxpart.timestamps`) and its hints (:mod:`fluxpart.stamp_hints`): the byte
offsets of a format of fixed-width numeric fields (read by array arithmetic), the width
of such a date, and the date fields of a "date, separator, time" format.
"""

from __future__ import annotations

import re

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
