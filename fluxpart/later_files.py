"""The layout of a later file of a folder whose first file alone carries the lines above
the header, or the header itself.

A logger or a data system that splits its record into month files often writes its title
lines (station, logger, program) into the first file only, or the header into the first
file only (later files appended to a download, a program that writes the header once per
card). Read with the first file's ``rows_before_header``, such a file's header or first
record is taken for a title, and its records for the header. Two rules read them, each
only where the reading is unambiguous:

- a file whose header line, character for character (blanks around it aside), is the
  first file's and stands above the line the settings name (none or fewer title lines):
  read from its own header line;
- a file with no header at all, whose first line holds as many fields as the first
  file's header, none of them one of its names, and at least half of them numbers (a
  record): read under the first file's header, with no title or units lines.

Anything else is left to the reader, which names the cause. Pure functions of the lines.

References
----------
Common practice of logger data systems: a header written once per file or once per
download (loggers' file-rotation settings).
"""

import re

#: A cell that is a number, point or comma decimal (as ``fluxpart.io._NUMBER_NAME``).
_NUMBER = re.compile(r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?")


def cells(line: str, delimiter: str) -> list:
    """The fields of a line, blanks and quotes around each aside."""
    separator = None if delimiter == "whitespace" else delimiter
    return [cell.strip().strip('"').strip() for cell in line.split(separator)]


def title_lines_lacking(lines: list, first_header: str, rows_before_header: int) -> int | None:
    """The number of lines above this file's header where it is fewer than
    `rows_before_header` and the header is `first_header` (the first file's header line,
    stripped); else None."""
    for index, line in enumerate(lines[:rows_before_header]):
        if line.strip() == first_header:
            return index
    return None


def headerless(lines: list, first_header: str, delimiter: str) -> bool:
    """True where this file's first non-blank line is a record of the first file's
    layout and no line is its header (rules of the module)."""
    first = next((line for line in lines if line.strip()), None)
    if first is None or first.strip() == first_header:
        return False
    names = cells(first_header, delimiter)
    fields = cells(first, delimiter)
    if len(fields) != len(names) or set(fields) & {name for name in names if name}:
        return False
    numbers = sum(bool(_NUMBER.fullmatch(field)) for field in fields)
    return numbers * 2 >= len(fields)
