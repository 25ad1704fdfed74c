"""Parts of one file that a logger program change divides: the header block written again
among the records with other columns.

A logger whose program is changed mid-file (a sensor added or removed, the columns
reordered by a new program) goes on appending to the same file: it writes its header block
again (its title line, the names, its units and statistics lines: the whole block the
file opens with) and the records after it follow the new names. Each such part is read as
a file of a series is (by its own header and its own lines under it), and the parts are
joined as files are (:func:`fluxpart.io.read_table`). A header block is taken for the
start of a part only where every rule holds:

- its names line names every time column of the settings and at least half of the names of
  the file's own header, every cell a name (no number), and differs from the header of the
  part before it in its names or their order (the same names in the same order are a
  restart's header written again, :mod:`fluxpart.interleaved_lines`);
- the lines directly above it that are no record of the part before (not a line of at
  least half numbers as wide as that part's header, :func:`fluxpart.later_files.is_record`,
  and not opening with a digit, as a stamp and a record cut short do) are its title lines:
  as many as the file's own (not blank; none in a file that has none), the top one of the
  same kind as the file's own (the same first cell and as many cells: the same logger's
  file format, another program's name or signature);
- the lines directly under it that are no record (as wide as it, no digit in a time
  column's cell, :func:`fluxpart.later_files.no_record`) are its units lines: exactly
  ``rows_after_header`` of them, and a record of its layout follows them (a logger writes
  its whole block again: a names line alone among the records of a file whose block has
  title or units lines is a status line or a header pasted in, and its names need not be
  those of the records under it);
- every part holds at least :data:`MIN_PART_RECORDS` records: a part of a few lines is too
  short to judge its columns by their values (a header line of another table pasted in?).

A block that fails a rule is refused with the reason, naming its line; a file without such
a block is left to the reader as before. Pure functions of the text's lines.

References
----------
Common practice of logger data systems: a program sent to a logger mid-file makes it write
its header block again before the records of the new program (loggers' table files
appended to across program changes).
"""

from dataclasses import dataclass
from itertools import islice

from .later_files import cells, is_record, no_record

#: Records a part must hold: one day of half-hourly records (our choice), enough for the
#: reader's value checks to judge each column under its name.
MIN_PART_RECORDS = 48


@dataclass(frozen=True)
class Part:
    """A part of the file: 0-based line indices. `first`: its first line (a title line or
    its header); `header`: its header line; `units`: the lines under the header before
    the first record; `end`: one past its last line."""

    first: int
    header: int
    units: int
    end: int


def _folded(line: str, delimiter: str) -> list:
    return [cell.casefold() for cell in cells(line, delimiter)]


def _names_only(names: list) -> bool:
    """Whether the cells of a line are a header's names: two or more, the first not
    empty, every one not empty holding a letter (a record's cells are numbers and
    stamps)."""
    return len(names) >= 2 and all(any(ch.isalpha() for ch in name) for name in names
                                   if name) and bool(names[0])


def _title_line(line: str, header: str, delimiter: str) -> bool:
    """A line above a header written again that is no record of the part before (its
    header `header`): not blank, not opening with a digit, no record of that layout."""
    opening = line.strip().lstrip("\"'")
    return (bool(opening) and not opening[0].isdigit()
            and not is_record(line, header, delimiter))


def program_parts(lines: list, rows_before_header: int, rows_after_header: int,
                  delimiter: str, time_columns) -> tuple[list, str, int]:
    """``(parts, refusal, line)``: the :class:`Part` s of a file that a header block
    written again with other columns divides, by the rules of the module (``[]`` where it
    holds none: the reader goes on as for any file), or the reason a block found cannot
    be trusted (``refusal``, the 0-based index of its names line in ``line``)."""
    if rows_before_header >= len(lines):
        return [], "", -1
    own = lines[rows_before_header]
    names = _folded(own, delimiter)
    times = [str(name).strip().casefold() for name in time_columns]
    if not times or not all(name in names for name in times):
        return [], "", -1
    known = set(names) - {""}
    titles = [line for line in lines[:rows_before_header] if line.strip()]
    first_data = rows_before_header + rows_after_header + 1
    parts = []
    first, header, units = 0, rows_before_header, rows_after_header
    for index in range(first_data, len(lines)):
        line = lines[index]
        if times[0] not in line.casefold():                   # most lines stop here
            continue
        found = _folded(line, delimiter)
        if (not all(name in found for name in times) or not _names_only(found)
                or len(set(found) & known) * 2 < len(known)):
            continue
        if found == _folded(lines[header], delimiter):
            continue                       # the part's own header again: a restart's
        reason, top, under = _block(lines, index, header, delimiter, time_columns,
                                    rows_before_header, rows_after_header, titles)
        if reason:
            return [], reason, index
        parts.append(Part(first, header, units, top))
        first, header, units = top, index, under
    if not parts:
        return [], "", -1
    parts.append(Part(first, header, units, len(lines)))
    for number, part in enumerate(parts):
        records = (line for line in lines[part.header + part.units + 1:part.end]
                   if is_record(line, lines[part.header], delimiter))
        held = sum(1 for _ in islice(records, MIN_PART_RECORDS))   # enough once there
        if held < MIN_PART_RECORDS:
            # the first part is named by the block that ends it: its own header is the
            # file's, no header written again
            which = "it opens" if number else "above it"
            return [], (f"the part {which} holds {held} record(s) (lines {part.first + 1}-"
                        f"{part.end}), fewer than {MIN_PART_RECORDS}: too few to judge its "
                        "columns by their values"), parts[max(number, 1)].header
    return parts, "", -1


def _block(lines: list, index: int, before: int, delimiter: str, time_columns,
           rows_before_header: int, rows_after_header: int, titles: list
           ) -> tuple[str, int, int]:
    """``(refusal, first line, units lines)`` of the header block whose names line is at
    `index` (the part before it read by the header at `before`)."""
    top = index
    while top > before + 1 and _title_line(lines[top - 1], lines[before], delimiter):
        top -= 1
    above = index - top
    if above > rows_before_header:
        what = (f"{above} lines that are no record stand above it" if rows_before_header
                else f"a line that is no record stands above it (line {top + 1}: "
                f"{lines[top].strip()[:60]!r}) in a file of no title lines")
        return (f"{what} where [input] rows_before_header = {rows_before_header}"), top, 0
    if titles and above != len(titles):
        # a logger writes its whole header block again; a names line alone among the
        # records of a file with title lines is a status line or a header pasted in,
        # whose names need not be those of the records under it
        return (f"{above} line(s) that are no record stand above it where the file's own "
                f"header has {len(titles)} title line(s) (a logger writes its whole header "
                "block again: a status line or a header pasted among the records?)"), top, 0
    if above and titles:
        mine, theirs = cells(titles[0], delimiter), cells(lines[top], delimiter)
        if mine[0].casefold() != theirs[0].casefold() or len(mine) != len(theirs):
            return (f"its title line (line {top + 1}: {lines[top].strip()[:60]!r}) is not of "
                    f"the kind of the file's own (line 1: {titles[0].strip()[:60]!r}): "
                    "another logger's or another program's file joined to this one?"), top, 0
    under = 0
    while (index + 1 + under < len(lines) and under <= rows_after_header
           and no_record(lines[index + 1 + under], lines[index], delimiter, time_columns)):
        under += 1
    if under > rows_after_header:
        return (f"more lines under it than [input] rows_after_header = {rows_after_header} "
                f"are no record (lines {index + 2}-{index + 1 + under})"), top, under
    if under < rows_after_header:
        # the same: its units lines, as many as the file's own (lines of a program's
        # records are all the text says of their units)
        return (f"{under} line(s) that are no record stand under it where [input] "
                f"rows_after_header = {rows_after_header} (a logger writes its whole header "
                "block again, its units lines too: a status line or a header pasted among "
                "the records?)"), top, under
    after = index + 1 + under
    if after >= len(lines) or not is_record(lines[after], lines[index], delimiter):
        shown = lines[after].strip()[:60] if after < len(lines) else "the end of the file"
        return (f"the line after it{' and its units lines' if under else ''} (line "
                f"{after + 1}: {shown!r}) is no record of its columns"), top, under
    return "", top, under
