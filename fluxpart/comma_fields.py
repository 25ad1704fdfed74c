"""Decimal commas left unquoted in a comma-delimited file.

A file read with ``[input] delimiter = ","`` and ``decimal = ","`` is readable only where
every value holding a decimal comma is quoted (``"2,63"``), as CSV writers quote a cell
holding the delimiter. Unquoted, ``2,63`` is two fields: a line holds as many extra
fields as its values hold decimal commas, and no reading can tell which comma separates
and which marks the decimals. The reader refuses such a file; this module names that
cause instead of a field count alone. So it does for a date-time stamp whose seconds'
fraction follows a comma, ISO 8601's preferred decimal sign, left unquoted
(``2021-06-01T00:30:00,000+01:00``, :func:`unquoted_fraction_commas`).
"""

from __future__ import annotations

import csv
import re

#: a comma between two digits outside quotes, as an unquoted decimal comma writes it
_DIGIT_COMMA_DIGIT = re.compile(r"\d,\d")
#: a date-time stamp with a comma before its seconds' fraction (ISO 8601-1:2019, section
#: 3.2.6 (m)), the fraction a field of its own (its offset or Z with it)
_STAMP_COMMA_FRACTION = re.compile(
    r"(?:^|,)\s*(\d{4}-?\d\d-?\d\d[Tt ]\d\d:?\d\d:?\d\d,\d{1,9}"
    r"(?: ?(?:[Zz]|[+-]\d\d(?::?\d\d)?))?)\s*(?=,|$)")


def field_count(line: str, delimiter: str) -> int:
    """Number of fields of one line, quotes honoured (RFC 4180 (m)).

    Parameters
    ----------
    line : str
        One line of the file, without its line end.
    delimiter : str
        One-character field delimiter.

    Returns
    -------
    int
        Fields of the line, as a CSV reader splits it [1].

    References
    ----------
    .. [1] Shafranovich, Y. (2005). Common Format and MIME Type for Comma-Separated
       Values (CSV) Files. RFC 4180 (m).
    """
    return len(next(csv.reader([line], delimiter=delimiter), [""]))


def unquoted_decimal_commas(path: str, text_lines: list, header_index: int,
                            first_data_index: int) -> str | None:
    """The refusal of a comma-delimited file whose decimal commas are not quoted.

    Parameters
    ----------
    path : str
        The file, as named in the message.
    text_lines : list of str
        The file's lines.
    header_index : int
        0-based index of the header line.
    first_data_index : int
        0-based index of the first record line (after any units line).

    Returns
    -------
    str or None
        One line naming the first record line with more fields than the header whose
        unquoted text holds a comma between two digits, and the fix; None where no such
        line exists or the header is one cell (the file's trouble is another).

    References
    ----------
    .. [1] Shafranovich, Y. (2005). RFC 4180, section 2, rule 6: fields containing the
       delimiter are enclosed in double quotes (m).
    """
    if header_index >= len(text_lines):
        return None
    width = field_count(text_lines[header_index], ",")
    if width < 2:
        # a header of one cell: a file of another delimiter, which the reader names
        return None
    for index in range(first_data_index, len(text_lines)):
        line = text_lines[index]
        if not line.strip():
            continue
        fields = field_count(line, ",")
        unquoted = re.sub(r'"[^"]*"', '""', line)
        if fields > width and _DIGIT_COMMA_DIGIT.search(unquoted):
            shown = line if len(line) <= 80 else line[:77] + "..."
            return (f"input file {path!r}: line {index + 1} ({shown!r}) has {fields} fields "
                    f"where the header has {width}: with [input] delimiter = \",\" and "
                    "decimal = \",\" a value with a decimal comma must be quoted (\"2,63\"), "
                    "and here it is not, so no reading can tell which comma separates values "
                    "and which marks decimals; export the file with another delimiter (\";\" "
                    "or a tab) and set [input] delimiter to it, or quote the values")
    return None


def unquoted_fraction_commas(path: str, text_lines: list, header_index: int,
                             first_data_index: int) -> str | None:
    """The refusal of a comma-delimited file whose stamps write their seconds' fraction
    after an unquoted comma.

    ``2021-06-01T00:30:00,000+01:00`` in a comma-delimited file is two fields unless it
    is quoted: each record line holds one field more than the header, and the reader
    named only the count (review89).

    Parameters
    ----------
    path : str
        The file, as named in the message.
    text_lines : list of str
        The file's lines.
    header_index : int
        0-based index of the header line.
    first_data_index : int
        0-based index of the first record line (after any units line).

    Returns
    -------
    str or None
        One line naming the first record line with more fields than the header whose
        unquoted text holds such a stamp, the stamp, and the fix; None where the first
        record line with more fields holds none.

    References
    ----------
    .. [1] ISO 8601-1:2019, section 3.2.6: the decimal sign is a comma or a full stop,
       the comma preferred (m).
    .. [2] Shafranovich, Y. (2005). RFC 4180, section 2, rule 6: fields containing the
       delimiter are enclosed in double quotes (m).
    """
    if header_index >= len(text_lines):
        return None
    width = field_count(text_lines[header_index], ",")
    for index in range(first_data_index, len(text_lines)):
        line = text_lines[index]
        if not line.strip():
            continue
        fields = field_count(line, ",")
        if fields <= width:
            continue
        stamp = _STAMP_COMMA_FRACTION.search(re.sub(r'"[^"]*"', '""', line))
        if stamp is None:
            return None
        return (f"input file {path!r}: line {index + 1} has {fields} fields where the "
                f"header has {width}, and its stamp {stamp.group(1)!r} writes the seconds' "
                "fraction after a comma (ISO 8601's decimal comma) that is not quoted, so "
                "the comma splits it in two fields: quote the stamps (\"...,000+01:00\") "
                "or write them with a full stop (00:30:00.000) in a copy of the file, and "
                "set [input] time_format = \"ISO8601\" (which reads the comma within "
                "quotes); or, if the stamps are whole, is a column name missing in the "
                "header?")
    return None


#: Marks a spreadsheet or a hand edit wraps a value in that are no CSV quotes (RFC 4180
#: quotes with the double quote alone): the apostrophe, typographic single and double
#: quotes, low-9 and angle quotes, a grave accent.
_OTHER_QUOTES = "'\u2018\u2019\u201a\u201c\u201d\u201e\u00ab\u00bb`\u00b4"
#: The two halves of a number with a decimal comma that a comma splits: an optional
#: sign and whole digits (or none: ",5"), then the fraction's digits and an optional
#: exponent, each half possibly wrapped in one of :data:`_OTHER_QUOTES`.
_LEFT_HALF = re.compile(rf"^\s*([{_OTHER_QUOTES}]?)[+-]?\d*$")
_RIGHT_HALF = re.compile(rf"^\d+(?:[eE][+-]?\d+)?([{_OTHER_QUOTES}]?)\s*$")


#: a number written with a full stop and a fraction
_POINT_FRACTION = re.compile(r"^\s*[+-]?\d*\.\d+(?:[eE][+-]?\d+)?\s*$")


def _holds_fractions(text_lines: list, first_data_index: int, width: int,
                     position: int) -> bool:
    """True where the first record line of `width` fields holds a number with a full stop
    and a fraction at `position` (the column holds fractions, so a whole number split by
    a comma there is one with a decimal comma)."""
    for line in text_lines[first_data_index:first_data_index + 200]:
        fields = next(csv.reader([line]), [])
        if len(fields) == width:
            return bool(_POINT_FRACTION.match(fields[position]))
    return False


def split_decimal_comma(path: str, text_lines: list, header_index: int,
                        first_data_index: int) -> str | None:
    """The refusal of a comma-delimited file read with a full stop as its decimal mark
    whose record line holds a number with a decimal comma the comma split in two fields.

    ``'1,0'`` (or ``1,0``, or in typographic quotes) in a comma-delimited file is two
    fields: the single quote is no CSV quote. The reader named only the field count and
    "a delimiter inside a value" (round leftovers61). A double-quoted ``"1,0"`` is one
    field, read by the reader's decimal-comma handling (``[input] decimal = ","``) and
    named by its column; this names the column whose value was split and those two
    remedies.

    Parameters
    ----------
    path : str
        The file, as named in the message.
    text_lines : list of str
        The file's lines.
    header_index : int
        0-based index of the header line.
    first_data_index : int
        0-based index of the first record line (after any units line).

    Returns
    -------
    str or None
        One line naming the first record line with more fields than the header, the
        value and its column, and the fix; None where that line holds one field too
        many and no single pair of neighbouring fields joins into such a number (a
        value wrapped in quotes of another kind on both halves is enough), or the
        header is one cell.

    References
    ----------
    .. [1] Shafranovich, Y. (2005). RFC 4180, section 2, rules 5-6: fields may be
       enclosed in double quotes, and fields containing the delimiter must be (m).
    """
    if header_index >= len(text_lines):
        return None
    header = next(csv.reader([text_lines[header_index]]), [])
    if len(header) < 2:
        return None
    for index in range(first_data_index, len(text_lines)):
        line = text_lines[index]
        if not line.strip():
            continue
        fields = next(csv.reader([line]), [])
        if len(fields) <= len(header):
            continue
        if len(fields) != len(header) + 1:
            return None
        joined = []
        for position in range(len(fields) - 1):
            left = _LEFT_HALF.match(fields[position])
            right = _RIGHT_HALF.match(fields[position + 1])
            if left and right and bool(left.group(1)) == bool(right.group(1)) and (
                    fields[position].strip(" " + _OTHER_QUOTES).lstrip("+-")
                    or fields[position + 1]):
                joined.append((position, left.group(1)))
        quoted = [found for found in joined if found[1]]
        if len(quoted) != 1:
            # unquoted, two whole numbers may be a column the line has in excess: named
            # only where the column holds fractions with a full stop on a whole line
            quoted = [found for found in joined
                      if _holds_fractions(text_lines, first_data_index, len(header), found[0])]
        chosen = quoted if len(quoted) == 1 else []
        if not chosen:
            return None
        position, mark = chosen[0]
        value = f"{fields[position].strip()},{fields[position + 1].strip()}"
        number = value.strip(_OTHER_QUOTES)
        wrapped = (f"in {mark!r} marks, which are no CSV quotes (those are double quotes), "
                   if mark else "unquoted, ")
        return (f"input file {path!r}: line {index + 1} has {len(fields)} fields where the "
                f"header has {len(header)}: column {header[position]!r} holds {value!r}, a "
                f"number with a decimal comma {wrapped}so the comma splits it in two fields; "
                f"write it with a full stop ({number.replace(',', '.')}) in a copy of the "
                "file, or, where the file's numbers all use decimal commas, quote each in "
                f"double quotes (\"{number}\") and set [input] decimal = \",\"")
    return None
