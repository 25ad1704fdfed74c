"""Lines among a table's records that are no records: the header written again after a
logger restart, and notes written between the records.

A logger that restarts its program (a power cut, a new program sent, a maintenance visit)
writes its title, header and units lines again into the file it appends to; a data
manager or the logger program notes a calibration, a visit or a power cut on a line of
its own, opened by a comment mark. Both are read here as lines to skip, found by rules
that cannot take a record for one:

- a repeated header is the header line itself, character for character (blanks around it
  aside), with the title lines above it and the units lines under it each equal to the
  file's own (as many as ``rows_before_header`` and ``rows_after_header``; since
  layouts40 a units line may write its units in another notation, "W/m2" for "W m-2",
  and a title line may differ where it is no record, a line of another width than the
  header that opens with no digit: a logger program's new version or signature), and
  with a
  record (a line of the header's fields) or the header's own block before it, blank and
  note lines aside (the notes judged as below), or a record cut short after a record
  (fewer fields, its stamp as long as the record's before: the power cut that restarted the
  logger; the reader drops it, as it drops a file's last line cut short; layouts42): a
  header after another line (a page number, a title the settings do not count) is left
  to the reader's refusal;
- a note line starts with a comment mark that no record of the file starts with, every
  note among the records starting with the same mark (the file's own), and a record
  follows it (a block ending the file is a footer, judged by the reader); a line of the
  header's fields with a number after the first is a record, not a note; a mark that is
  the delimiter, a whitespace-delimited file and a first field that is a spreadsheet error
  ("#N/A", "#VALUE!") are never read as one.

Pure functions of the text's lines; the reader empties the lines found (line numbers
kept) and names them in its warnings.

References
----------
Comment marks of languages: "#" (shell, Python, R), "//" and "/*" (C, C++, Java), "%"
(MATLAB), "!" (Fortran 90), ";" (INI files) (each language's reference (m)). Spreadsheet
error values "#N/A", "#VALUE!", "#DIV/0!", "#REF!", "#NAME?", "#NUM!", "#NULL!"
(Microsoft Excel documentation (m)).
"""

import re

from . import comma_fields
from .variables import same_notation

#: Marks that open a comment line (as ``fluxpart.io``'s refusal names them).
COMMENT_MARKS = ("#", "//", "/*", "%", "!", ";")
#: A spreadsheet's error value as a first field: a record, not a note.
_SPREADSHEET_ERROR = re.compile(r"\s*#(?:N/A|VALUE!|DIV/0!|REF!|NAME\?|NUM!|NULL!|GETTING_DATA)",
                                re.IGNORECASE)
#: Line breaks other than CR, LF and CR LF that ``str.splitlines`` counts: a text holding
#: one is left alone (its line numbers would differ between the reader's two counts).
_NUMBER = re.compile(r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?")
_OTHER_BREAKS = re.compile("[\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029]")


def _split(line: str, delimiter: str) -> list:
    return line.split() if delimiter == "whitespace" else line.split(delimiter)


def field_count(line: str, delimiter: str) -> int:
    """Fields of a line split at `delimiter`, a delimiter inside quotes honoured as a CSV
    reader honours it (:func:`fluxpart.comma_fields.field_count`, RFC 4180 (m)): a note
    column quoted only where its text holds the delimiter ("ok, checked") made the record
    before a repeated header one field wider than the header, and the header refused
    (review60)."""
    if '"' in line and delimiter != "whitespace":
        return comma_fields.field_count(line, delimiter)
    return len(_split(line, delimiter))


def _mark(line: str, marks: tuple) -> str | None:
    stripped = line.lstrip()
    if _SPREADSHEET_ERROR.match(stripped):
        return None
    return next((mark for mark in marks if stripped.startswith(mark)), None)


#: A line opening with a comment mark (any line, blanks before the mark aside).
_MARKED_LINE = re.compile(r"[\r\n][ \t]*(?:#|//|/\*|%|!|;)")


def may_hold(text: str, rows_before_header: int, delimiter: str, note_mark=None) -> bool:
    """False where the text can hold neither a repeated header nor a note line: its
    header line occurs once and no line opens with a comment mark (C-speed passes, so
    that the usual file costs no Python loop over its lines)."""
    if delimiter == "whitespace" and not note_mark:
        return False
    start = 0
    for _ in range(rows_before_header + 1):
        found = re.compile(r"\r\n|\r|\n").search(text, start)
        if found is None:
            return False
        header, start = text[start:found.start()].strip(), found.end()
    if header and text.count(header, start) > 0:
        return True
    if note_mark:
        return note_mark in text[start:]
    marks = [mark for mark in COMMENT_MARKS if not mark.startswith(delimiter)]
    return any(mark in text for mark in marks) and bool(_MARKED_LINE.search(text, start))


def repeated_header_blocks(lines: list, rows_before_header: int, rows_after_header: int,
                           delimiter: str, titles_from: int = 0) -> list:
    """Blocks ``(first, last)`` (0-based line indices, inclusive) of the header written
    again among the records with its title and units lines, by the rules of the module.
    `titles_from`: the index of the first title line (a later part of a file that a
    program change divides is read with the lines above its own block blank,
    :mod:`fluxpart.program_parts`).

    Returns [] where any repeat of the header line fails them (the reader then refuses,
    naming the line), so that a file is read whole or not at all.
    """
    if (delimiter == "whitespace" or rows_before_header >= len(lines)
            or any(_OTHER_BREAKS.search(line) for line in lines[:rows_before_header + 1])):
        return []
    header = lines[rows_before_header].strip()
    if not header:
        return []
    titles = [line.strip() for line in lines[titles_from:rows_before_header]]
    units = [line.strip() for line in
             lines[rows_before_header + 1:rows_before_header + 1 + rows_after_header]]
    first_data = rows_before_header + rows_after_header + 1
    width = field_count(header, delimiter)
    blocks = []
    for index in range(first_data, len(lines)):
        if lines[index].strip() != header:
            continue
        first, last = index - len(titles), index + rows_after_header
        if (first < first_data or last >= len(lines)
                or not all(_same_title(own, line, width, delimiter)
                           for own, line in zip(titles, lines[first:index], strict=True))
                or not all(_same_units(own, line, delimiter)
                           for own, line in zip(units, lines[index + 1:last + 1],
                                                strict=True))):
            return []
        before = _before(lines, first, delimiter)   # blank lines and notes ("# power cut")
        after_block = blocks and before == blocks[-1][1]
        if (not after_block and field_count(lines[before], delimiter) != width
                and not _cut_record(lines, before, delimiter, width,
                                    [(0, first_data - 1), *blocks], last + 1)):
            return []
        blocks.append((first, last))
    return blocks


def _before(lines: list, index: int, delimiter: str) -> int:
    """The index of the last line before `index` that is neither blank nor a note, or -1."""
    marks = tuple(mark for mark in COMMENT_MARKS if not mark.startswith(delimiter))
    index -= 1
    while index >= 0 and (not lines[index].strip() or _mark(lines[index], marks)):
        index -= 1
    return index


def _cut_record(lines: list, index: int, delimiter: str, width: int, headers: list,
                after: int) -> bool:
    """Whether line `index` is a record cut short by a power cut: more than one field
    and fewer than the header's `width`, its first field (the stamp) as long as that of a
    record of `width` fields: the record before it, or where a header block stands before
    it (the cut record the first after the file's header or a header written again,
    review60) the line `after` (the first after the header written again after it).
    `headers` holds the header blocks ``(first, last)`` before `index`, the file's own
    first. A page number, "2", is no record."""
    line = lines[index].strip() if index >= 0 else ""
    if not line or not 1 < field_count(line, delimiter) < width:
        return False
    previous = _before(lines, index, delimiter)
    if any(first <= previous <= last for first, last in headers):
        previous = after if after < len(lines) else -1
    if previous < 0 or field_count(lines[previous], delimiter) != width:
        return False
    return len(_split(lines[previous].strip(), delimiter)[0]) == len(_split(line, delimiter)[0])


def cut_records(lines: list, blocks: list, rows_before_header: int, rows_after_header: int,
                delimiter: str) -> list:
    """Indices (0-based) of the records cut short right before the repeated header
    `blocks` (``(first, last)`` of :func:`repeated_header_blocks`): a logger stopped
    mid-write, restarted and wrote its header again (layouts42: refused before, as a
    header after a line of another width). As the file's own last line cut short, such
    a line is a record whose last value may be cut mid-number: the reader drops it."""
    if not blocks:
        return []
    width = field_count(lines[rows_before_header], delimiter)
    headers = [(0, rows_before_header + rows_after_header), *blocks]
    cut = []
    for place, (first, last) in enumerate(blocks):
        index = _before(lines, first, delimiter)
        if (index >= 0 and field_count(lines[index], delimiter) != width
                and _cut_record(lines, index, delimiter, width, headers[:place + 1], last + 1)):
            cut.append(index)
    return cut


def note_lines(lines: list, first_data: int, delimiter: str, width: int, note_mark=None
               ) -> tuple[list, str | None]:
    """Indices (0-based) of the note lines among the records and their mark, by the rules
    of the module; ``([], None)`` where there are none or they are not the file's own
    (two marks, or a record starting with the mark: a line of the header's `width`
    fields with a number after its first).

    `note_mark` (``[input] note_mark``): the mark is the setting's, also where it opens
    the delimiter or a whitespace-delimited file's line, and notes after the last record
    are notes too; a record starting with it still leaves every note unread.
    """
    if delimiter == "whitespace" and not note_mark:
        return [], None
    marks = ((note_mark,) if note_mark else
             tuple(mark for mark in COMMENT_MARKS if not mark.startswith(delimiter)))
    found, record_marks, last_record = [], set(), None
    for index in range(first_data, len(lines)):
        line = lines[index]
        if not line.strip():
            continue
        mark = _mark(line, marks)
        if mark is not None and field_count(line, delimiter) == width and any(
                _NUMBER.fullmatch(field.strip()) for field in _split(line, delimiter)[1:]):
            record_marks.add(mark)                        # "#12,0.31,...": a record
            last_record = index
            continue
        if mark is None:
            last_record = index
            first_field = next(iter(_split(line, delimiter)), "").lstrip()
            if not _SPREADSHEET_ERROR.match(first_field):
                record_marks.update(m for m in marks if first_field.startswith(m))
        else:
            found.append(index)
    notes = [index for index in found if last_record is not None
             and (note_mark or index < last_record)]
    if not notes:
        return [], None
    marks_used = {_mark(lines[index], marks) for index in notes}
    if len(marks_used) != 1 or marks_used & record_marks:
        return [], None
    return notes, marks_used.pop()


def _cells(line: str, delimiter: str) -> list:
    return [cell.strip().strip('"').strip() for cell in _split(line, delimiter)]


def _same_title(own: str, line: str, width: int, delimiter: str) -> bool:
    """A title line of a repeated block: the file's own, or another line that is no
    record (not of the header's width, not opening with a digit as a stamp does: a
    record cut short is no title): a program's new version or signature."""
    opening = line.strip().lstrip('"\'')
    return line.strip() == own or (bool(opening) and not opening[0].isdigit()
                                   and field_count(line, delimiter) != width)


def _same_units(own: str, line: str, delimiter: str) -> bool:
    """A units line of a repeated block: the file's own, cell by cell in any notation."""
    if line.strip() == own:
        return True
    mine, theirs = _cells(own, delimiter), _cells(line, delimiter)
    return len(mine) == len(theirs) and all(same_notation(a, b)
                                            for a, b in zip(mine, theirs, strict=True))


def rewritten_lines(lines: list, block: tuple, rows_before_header: int,
                    titles_from: int = 0) -> list:
    """``(own, again)`` line indices of a repeated block's title and units lines written
    otherwise than the file's own (another title, units in another notation);
    `titles_from` as for :func:`repeated_header_blocks`."""
    first, last = block
    return [(own, again) for own, again in zip(range(titles_from, titles_from + last - first + 1),
                                                range(first, last + 1), strict=True)
            if own != rows_before_header and lines[own].strip() != lines[again].strip()]


def changed_units(lines: list, header_at: int, again_at: int, rows_after_header: int,
                  delimiter: str) -> list:
    """``(name, first, later)`` for each column whose cell in the lines under a repeated
    header (at `again_at`) differs from its cell in the lines under the file's own header
    (at `header_at`): a units (or processing) line written anew when a logger's program or
    firmware changed a column's unit. Empty where those lines are equal, or where a line
    differs in width from the header (no cell stands under one name).

    Blanks and quotes around a cell are no difference ("W m-2" is W m-2).
    """
    names = _cells(lines[header_at], delimiter)
    changes = []
    for offset in range(1, rows_after_header + 1):
        if again_at + offset >= len(lines):
            return []
        first = _cells(lines[header_at + offset], delimiter)
        later = _cells(lines[again_at + offset], delimiter)
        if len(first) != len(names) or len(later) != len(names):
            return []
        changes += [(name, a, b) for name, a, b in zip(names, first, later, strict=True)
                    if not same_notation(a, b)]
    return changes


def ranges(indices: list) -> str:
    """0-based line indices as 1-based line numbers in runs: "12, 40-42"."""
    runs, start, previous = [], None, None
    for index in sorted(indices):
        if start is None:
            start = previous = index
        elif index == previous + 1:
            previous = index
        else:
            runs.append((start, previous))
            start = previous = index
    if start is not None:
        runs.append((start, previous))
    return ", ".join(f"{a + 1}" if a == b else f"{a + 1}-{b + 1}" for a, b in runs)
