"""The layout of a later file of a folder whose first file alone carries the lines above
the header, or the header itself.

A logger or a data system that splits its record into month files often writes its title
lines (station, logger, program) into the first file only, or the header into the first
file only (later files appended to a download, a program that writes the header once per
card). Read with the first file's ``rows_before_header``, such a file's header or first
record is taken for a title, and its records for the header. Four rules read them, each
only where the reading is unambiguous:

- a file whose header line, character for character (blanks around it aside), is the
  first file's and stands above the line the settings name (none or fewer title lines):
  read from its own header line;
- a file whose header line, character for character, is the first file's and stands
  below the line the settings name (up to 10 lines: a title line added by hand or by an
  export), none of the lines above it a record: read from its own header line (round
  layouts50);
- a file with no header at all, whose first line holds as many fields as the first
  file's header, none of them one of its names, and at least half of them numbers (a
  record): read under the first file's header, with no title or units lines;
- a file whose header line is the first file's in its place but which has more or fewer
  lines under it that are no records (a units or aggregation line, written by one logger
  program and not by the other): as wide as the header, its time columns' cells without
  a digit (a record's stamp always has one), followed by a record; counted alike in the
  first file, whose count must be its ``rows_after_header``: read past this file's own
  such lines (round layouts39).

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


#: The most lines a later file may have above its header beyond the first file's.
MAX_ADDED_LINES = 10


def title_lines_added(lines: list, first_header: str, rows_before_header: int,
                      delimiter: str) -> int | None:
    """The number of lines above this file's header where it is more than
    `rows_before_header` (by up to :data:`MAX_ADDED_LINES`), the header is `first_header`
    (the first file's header line, stripped) and no line above it is a record of its
    layout (:func:`is_record`); else None."""
    for index in range(rows_before_header + 1,
                       min(len(lines), rows_before_header + 1 + MAX_ADDED_LINES)):
        if lines[index].strip() == first_header:
            above = lines[rows_before_header:index]
            if any(is_record(line, first_header, delimiter) for line in above):
                return None
            return index
    return None


def is_record(line: str, header: str, delimiter: str) -> bool:
    """True where `line` holds as many fields as `header` and at least half of them are
    numbers."""
    fields = cells(line, delimiter)
    numbers = sum(bool(_NUMBER.fullmatch(field)) for field in fields)
    return len(fields) == len(cells(header, delimiter)) and numbers * 2 >= len(fields)


def headerless(lines: list, first_header: str, delimiter: str) -> bool:
    """True where this file's first non-blank line is a record of the first file's
    layout and no line is its header (rules of the module)."""
    first = next((line for line in lines if line.strip()), None)
    if first is None or first.strip() == first_header:
        return False
    names = {name for name in cells(first_header, delimiter) if name}
    return not set(cells(first, delimiter)) & names and is_record(first, first_header,
                                                                  delimiter)


def no_record(line: str, header: str, delimiter: str, time_columns) -> bool:
    """True where `line` is as wide as `header` and no cell of a time column (all of them
    named in the header) holds a digit: a units or aggregation line, not a record."""
    names = cells(header, delimiter)
    places = [names.index(name) for name in time_columns if name in names]
    fields = cells(line, delimiter)
    return (bool(places) and len(places) == len(time_columns) and len(fields) == len(names)
            and not any(ch.isdigit() for i in places for ch in fields[i]))


def lines_under_header(lines: list, header_at: int, delimiter: str, time_columns) -> int:
    """How many lines (up to 3) directly under the header line at `header_at` are no
    records (:func:`no_record`) and are followed by a line at least half of whose cells
    are numbers (rules of the module)."""
    if header_at >= len(lines):
        return 0
    count = 0
    for line in lines[header_at + 1:header_at + 4]:
        if not no_record(line, lines[header_at], delimiter, time_columns):
            break
        count += 1
    after = cells(next(iter(lines[header_at + 1 + count:]), ""), delimiter)
    numbers = sum(bool(_NUMBER.fullmatch(field)) for field in after)
    return count if numbers * 2 >= len(after) > 1 else 0
