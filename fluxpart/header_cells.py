r"""Header cells whose writing is layout, not name: a comment mark, a line break.

Programs that write a table with a header often open the header line with a comment mark
so that readers of plain numbers skip it: ``# stamp,co2_net,...`` (NumPy's ``savetxt``
writes its ``header`` after ``"# "`` by default; MATLAB and Octave users write ``%``).
Read as a table, the first column is named ``"# stamp"``, and a setting naming
``"stamp"`` found no such column (layouts43; refused before with "did you mean
'# stamp'?"). The mark belongs to the line, not to the name: where the name after it is
the one a setting gives and the marked name is none, the column is that name.

A spreadsheet whose header cells wrap their text (a name and, on a second line, its
unit) saves each such cell quoted with the line break inside (RFC 4180, section 2.6):
the name ``"co2_net\n[umol m-2 s-1]"``, which no setting names and the refusal showed
as written. The break is the cell's layout: read as one blank, the name is
``"co2_net [umol m-2 s-1]"``, which the reader's unit checks and hints know (layouts43).
"""
from __future__ import annotations

import re

#: Comment marks a header line is opened with (NumPy ``savetxt``'s ``comments="# "``,
#: MATLAB/Octave ``%``, C++ ``//``, Fortran ``!``; common practice)
HEADER_MARKS = ("#", "%", "//", "!")


def unmarked_header(text: str, rows_before_header: int, delimiter: str, wanted) -> tuple:
    """The text with the comment mark that opens its header line taken off, and the mark.

    Parameters
    ----------
    text : str
        The decoded file.
    rows_before_header : int
        Lines above the header line.
    delimiter : str
        ``[input] delimiter``; ``"whitespace"`` for fields split at blanks, where the mark
        stands as a field of its own (``# stamp co2_net``, NumPy's ``savetxt`` default).
    wanted : iterable of str
        Every name the settings give (mapped, time and flag columns, other names).

    Returns
    -------
    tuple of (str, str)
        The text and the mark (one of :data:`HEADER_MARKS`), where the header line opens
        with the mark, blanks and a name of `wanted`, and the line's first cell as
        written is no setting's name; else `text` unchanged and "" (the usual file).

    References
    ----------
    NumPy documentation, ``numpy.savetxt``: ``header`` is written after ``comments``,
    default ``"# "`` (m).
    """
    if not text.lstrip("\ufeff").startswith(HEADER_MARKS) and rows_before_header == 0:
        return text, ""
    head = text.split("\n", rows_before_header + 1)
    if len(head) <= rows_before_header:
        return text, ""
    line = head[rows_before_header]
    mark = next((mark for mark in HEADER_MARKS if line.startswith(mark)), "")
    if not mark:
        return text, ""
    rest = line[len(mark):].lstrip(" \t")
    split = rest[:4096].split() if delimiter == "whitespace" else rest[:4096].split(delimiter)
    written = line[:4096].split() if delimiter == "whitespace" else line[:4096].split(delimiter)
    wanted = {name for name in wanted if isinstance(name, str)}
    first = split[0].strip().strip('"') if split else ""
    if not first or first not in wanted or written[0].strip().strip('"') in wanted:
        return text, ""
    head[rows_before_header] = rest
    return "\n".join(head), mark


def unwrapped_names(file_names: list, wanted) -> dict:
    """``{written: name}`` for names holding a line break, read with one blank for
    each break and the blanks around it.

    Parameters
    ----------
    file_names : list of str
        The file's column names as read.
    wanted : iterable of str
        Every name the settings give: a name written so in the settings stays.

    Returns
    -------
    dict
        Only names with a line break (CR or LF) whose unwrapped form is no other column
        of the file; empty for the usual file.

    References
    ----------
    RFC 4180, Common Format and MIME Type for Comma-Separated Values (CSV) Files,
    section 2.6: fields containing line breaks are enclosed in double quotes (m).
    """
    import re

    wanted = {name for name in wanted if isinstance(name, str)}
    renamed = {}
    for name in file_names:
        if isinstance(name, str) and ("\n" in name or "\r" in name) and name not in wanted:
            unwrapped = re.sub(r"\s*[\r\n]+\s*", " ", name).strip()
            if unwrapped not in file_names:
                renamed[name] = unwrapped
    return renamed


def _cells(line: str, delimiter: str) -> list:
    """A line's cells, stripped of blanks and quotes."""
    split = line.split() if delimiter == "whitespace" else line.split(delimiter)
    return [cell.strip().strip('"').strip() for cell in split]


def _is_number(cell: str) -> bool:
    try:
        float(cell.replace(",", "."))
    except ValueError:
        return False
    return True


def group_line_above(text: str, rows_before_header: int, delimiter: str, wanted) -> bool:
    """Whether the line set as the header is a line of group titles above it
    ("Fluxes,,Met,,,Soil,,": a spreadsheet's merged cells over its columns).

    It is where that line holds none of `wanted`, no number and some empty cells, and the
    next line holds every name of `wanted` (so no other line can be the header); the
    header is then the next line (layouts47; refused before, "set rows_before_header").

    Parameters
    ----------
    text : str
        The decoded file.
    rows_before_header : int
        Lines set above the header line.
    delimiter : str
        ``[input] delimiter`` (``"whitespace"`` is never judged: its empty cells vanish).
    wanted : iterable of str
        Every name the settings give (mapped, time and flag columns).

    Returns
    -------
    bool

    References
    ----------
    Spreadsheets write a merged cell's text in its first column and leave the others
    empty when saved as CSV (common practice).
    """
    if delimiter == "whitespace":
        return False
    head = text.lstrip("\ufeff").split("\n", rows_before_header + 2)
    if len(head) < rows_before_header + 2:
        return False
    wanted = {name for name in wanted if isinstance(name, str)}
    group = _cells(head[rows_before_header].rstrip("\r"), delimiter)
    names = set(_cells(head[rows_before_header + 1].rstrip("\r"), delimiter))
    filled = [cell for cell in group if cell]
    return bool(wanted and filled and len(filled) < len(group) and wanted <= names
                and not wanted & set(group) and not any(_is_number(c) for c in filled))


def bracketed_units_row(text: str, rows_before_header: int, delimiter: str) -> str:
    """The enclosing marks of a row of units under the header ("[-],[umol/m2/s],[W/m2]
    ,...", or "(-),(umol m-2 s-1),(W m-2),..."): every cell, the stamp column's too,
    enclosed in one kind of brackets or empty, one cell a header name each, nothing
    enclosed a number (an accountant's "(1.5)" is -1.5), which no record can be
    (layouts47 brackets, layouts51 parentheses; refused before, "set rows_after_header
    = 1"); "" where the line is no such row.

    Parameters
    ----------
    text : str
        The decoded file.
    rows_before_header : int
        Lines above the header line.
    delimiter : str
        ``[input] delimiter``.

    Returns
    -------
    str
        ``"[]"`` or ``"()"``, or ``""``.

    References
    ----------
    Loggers and spreadsheets write a column's unit in brackets or parentheses in a row
    under its name (common practice).
    """
    head = text.lstrip("\ufeff").split("\n", rows_before_header + 2)
    if len(head) < rows_before_header + 3:
        return ""
    names = _cells(head[rows_before_header].rstrip("\r"), delimiter)
    units = _cells(head[rows_before_header + 1].rstrip("\r"), delimiter)
    filled = [cell for cell in units if cell]
    if len(units) != len(names) or len(filled) < max(2, len(units) // 2) or not units[0]:
        return ""
    for marks in UNIT_MARKS:
        if all(len(c) >= 2 and c[0] == marks[0] and c[-1] == marks[1]
               and not _is_number(c[1:-1]) for c in filled):
            return marks
    return ""


#: The brackets a units row encloses each unit in (common practice)
UNIT_MARKS = ("[]", "()")


def enclosed_unit(cell: str) -> str:
    """The unit a units-row cell writes within one pair of :data:`UNIT_MARKS`
    ("(mg m-2 s-1)" -> "mg m-2 s-1"), else the cell as written."""
    cell = cell.strip()
    for marks in UNIT_MARKS:
        if len(cell) >= 2 and cell[0] == marks[0] and cell[-1] == marks[1] \
                and marks[0] not in cell[1:-1] and marks[1] not in cell[1:-1]:
            return cell[1:-1].strip()
    return cell


#: Field separators a header line retyped by hand or by another program may be written
#: with where the records use another (the reader's delimiters; "whitespace" a run of
#: blanks or tabs)
HEADER_SEPARATORS = (",", ";", "\t", "|", "whitespace")
#: Records under the header judged for their width and separators
RECORDS_JUDGED = 20
#: Each separator's name in a reader note
SEPARATOR_WORDS = {",": "commas", ";": "semicolons", "\t": "tabs", "|": "vertical bars",
                   "whitespace": "blanks"}
#: Where a header written with blanks splits: a tab or a run of two or more blanks (a
#: name may hold one blank)
_WIDE_BLANKS = re.compile(r"\t| {2,}")


def header_separator(text: str, rows_before_header: int, rows_after_header: int,
                     delimiter: str, time_column: str = "") -> str:
    """The one other separator the header line is written with where the records use
    `delimiter` ("stamp,co2_net,..." over "202101010030;0.329;..."), or "".

    It is where the header is one cell under `delimiter`, the first records below the
    lines under the header (up to :data:`RECORDS_JUDGED`) each split into the same n >= 2
    fields under it and hold none of another separator of :data:`HEADER_SEPARATORS`,
    and one such separator splits the header into n non-empty names (or several alike:
    tabs read as tabs and as blanks), the time column's among them; blanks separate
    names only as tabs or runs of two or more (`header_names`): every name then stands
    over its field (layouts51; refused before, "line 2 has 9 fields where
    the header has 1"). A semicolon file with decimal commas read under "," is no such
    file: its records hold the header's semicolons.

    Parameters
    ----------
    text : str
        The decoded file.
    rows_before_header, rows_after_header : int
        Lines above the header and between it and the records.
    delimiter : str
        ``[input] delimiter``.
    time_column : str, optional
        ``[input] time_column`` (its first name): where given, one of the names (a title
        line set as the header by a wrong rows_before_header is left to its refusal).

    Returns
    -------
    str
        That separator (one of :data:`HEADER_SEPARATORS`), or "" where there is none.

    References
    ----------
    A header typed again by hand or pasted from another file keeps that file's field
    separator (common practice).
    """
    first = rows_before_header + rows_after_header + 1
    head = text.lstrip("\ufeff").split("\n", first + RECORDS_JUDGED)
    header = head[rows_before_header].rstrip("\r") if len(head) > first else ""
    records = [line.rstrip("\r") for line in head[first:first + RECORDS_JUDGED]]
    records = [line for line in records if line.strip()]
    widths = {len(_cells(line, delimiter)) for line in records}
    if not records or len(_cells(header, delimiter)) != 1 or len(widths) != 1:
        return ""
    width = widths.pop()
    fits = {other: names for other in HEADER_SEPARATORS if other != delimiter
            and (names := header_names(header, other)) and len(names) == width
            and all(names) and (not time_column or time_column in names)
            and not any(mark in line for line in records
                        for mark in _marks(other) - set(delimiter))}
    # tabs read alike as tabs and as blanks: one reading (review73)
    readings = {tuple(names) for names in fits.values()}
    return next(iter(fits)) if len(readings) == 1 and width >= 2 else ""


def header_names(line: str, separator: str) -> list:
    """A header line's names under `separator`; under ``"whitespace"`` split at tabs and
    runs of two or more blanks only: a name may hold a single blank ("net radiation",
    "date time"), so a header of single blanks tells no names (review73: "wind dir" over
    a header missing one name was read with every later name one field off)."""
    if separator != "whitespace":
        return _cells(line, separator)
    return [cell.strip().strip('"').strip() for cell in _WIDE_BLANKS.split(line.strip())]


def _marks(separator: str) -> set:
    """The characters `separator` splits at."""
    return {" ", "\t"} if separator == "whitespace" else {separator}


def with_header_separator(text: str, rows_before_header: int, rows_after_header: int,
                          other: str, delimiter: str) -> str:
    """`text` with the header line, and each line under it written in `other` too,
    split by `other` and joined by `delimiter` (blanks for ``"whitespace"``)."""
    lines = text.split("\n", rows_before_header + rows_after_header + 1)
    join = " " if delimiter == "whitespace" else delimiter
    for at in range(rows_before_header, rows_before_header + rows_after_header + 1):
        line = lines[at]
        end = "\r" if line.endswith("\r") else ""
        body = line.rstrip("\r")
        if len(_cells(body, delimiter)) == 1 and len(header_names(body, other)) > 1:
            cells = (_WIDE_BLANKS.split(body.strip()) if other == "whitespace"
                     else body.split(other))
            lines[at] = join.join(cell.strip() for cell in cells) + end
    return "\n".join(lines)
