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


def bracketed_units_row(text: str, rows_before_header: int, delimiter: str) -> bool:
    """Whether the line under the header is a row of units in brackets ("[-],
    [umol/m2/s],[W/m2],...": every cell, the stamp column's too, bracketed or empty, one
    cell a header name each, none a number), which no record can be (layouts47; refused
    before, "set rows_after_header = 1").

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
    bool

    References
    ----------
    Loggers and spreadsheets write a column's unit in brackets in a row under its name
    (common practice).
    """
    head = text.lstrip("\ufeff").split("\n", rows_before_header + 2)
    if len(head) < rows_before_header + 3:
        return False
    names = _cells(head[rows_before_header].rstrip("\r"), delimiter)
    units = _cells(head[rows_before_header + 1].rstrip("\r"), delimiter)
    filled = [cell for cell in units if cell]
    return (len(units) == len(names) and len(filled) >= max(2, len(units) // 2)
            and bool(units[0]) and all(c.startswith("[") and c.endswith("]") for c in filled))
