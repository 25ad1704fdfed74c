"""Lines wrapped whole in one pair of double quotes.

A program that writes each record as one string (a script printing ``repr`` of a line,
an export of a one-column table, a spreadsheet that saved a pasted block as one cell a
row) puts a quote at the start and end of every line: ``"stamp,co2,rg"``. CSV reads each
such line as one field holding the delimiters (RFC 4180, section 2: a field in quotes
may hold the delimiter (m)), so the header is one name and the reader's usual hint, to
set ``[input] delimiter`` to the character the cell holds, names the delimiter already
set. This module names the quotes instead (layouts42).

An export that marks every cell as text with single quotes (``'stamp','co2_net'`` over
``'202101010030','0.329'``) writes quotes CSV does not know (RFC 4180 quotes with double
quotes only (m)); where every cell of the header and of the first records is wrapped so,
each quote pair is layout, and the cells are read without them (`single_quoted`,
layouts51; refused before, naming the quotes).
"""

from __future__ import annotations

import csv
import re


def wrapped_lines_message(lines: list, delimiter: str, header_at: int,
                          first_record_at: int) -> str:
    """Why a file's header and first record are one field each, or ''.

    Parameters
    ----------
    lines : list of str
        The file's lines, without line ends.
    delimiter : str
        ``[input] delimiter`` (one character; "whitespace" is never quoted so).
    header_at, first_record_at : int
        0-based indices of the header line and of the first line after the lines
        ``rows_after_header`` counts.

    Returns
    -------
    str
        Where both lines, blanks around them aside, open and close with a double quote,
        hold no other and hold `delimiter` inside: the cause and the fix (the quotes
        removed at both ends of each line in a copy of the file); '' otherwise.
    """
    if len(delimiter) != 1 or first_record_at >= len(lines):
        return ""
    shown = []
    for index in (header_at, first_record_at):
        line = lines[index].strip()
        if not (len(line) > 2 and line[0] == line[-1] == '"' and line.count('"') == 2
                and delimiter in line):
            return ""
        shown.append(f"line {index + 1}: {line[:60]!r}")
    return (f"every line is wrapped in one pair of double quotes ({'; '.join(shown)}), so "
            f"each line is one field holding its {delimiter!r} delimiters: remove the quote "
            "at the start and at the end of each line in a copy of the file")


#: Records under the header judged for their single quotes
RECORDS_JUDGED = 20


def single_quoted(lines: list, delimiter: str, header_at: int, first_record_at: int) -> bool:
    """Whether every cell of the header line and of the first non-blank records (up to
    :data:`RECORDS_JUDGED`) is wrapped in one pair of single quotes and no line holds a
    double quote: the file quotes with ``'``, read so with a note.

    Parameters
    ----------
    lines : list of str
        The file's lines, without line ends.
    delimiter : str
        ``[input] delimiter`` (one character; "whitespace" is never judged: a quoted stamp
        holding a blank splits under it).
    header_at, first_record_at : int
        0-based indices of the header line and of the first line after the lines
        ``rows_after_header`` counts.

    Returns
    -------
    bool

    References
    ----------
    RFC 4180, section 2 (fields quoted with double quotes) (m); exports that mark text
    cells with apostrophes (common practice).
    """
    if len(delimiter) != 1 or header_at >= len(lines):
        return False
    records = [line for line in lines[first_record_at:first_record_at + RECORDS_JUDGED]
               if line.strip()]
    if not records:
        return False
    # quoted cells apart by the delimiter, which a quoted cell may hold ("'2,63'" in a
    # comma file of decimal commas, review73: was named unquoted)
    cell = r"\s*'[^']*'\s*"
    quoted = re.compile(f"{cell}(?:{re.escape(delimiter)}{cell})*")
    return all('"' not in line and quoted.fullmatch(line)
               for line in [lines[header_at], *records])


def line_opening_quote(lines: list, delimiter: str, first_record_at: int) -> int:
    """Index of the first record line that ends inside a single-quoted cell (``'tis
    windy``, a spreadsheet's text mark ``'0.5``), or -1.

    Where a file is read with ``'`` as its quote character (`single_quoted`), such a
    quote runs on over the following lines to the next apostrophe ("rock'n roll"),
    and the records between would be read as one cell: a quoted cell spanning lines is
    no layout of such an export (review73).

    Parameters
    ----------
    lines : list of str
        The file's lines, without line ends.
    delimiter : str
        ``[input] delimiter`` (one character).
    first_record_at : int
        0-based index of the first record line.

    Returns
    -------
    int

    References
    ----------
    Python's ``csv`` module (``strict=True`` raises "unexpected end of data" on a line
    that ends inside a quoted field) (Python documentation, csv).
    """
    for at in range(first_record_at, len(lines)):
        if "'" not in lines[at]:
            continue
        try:
            next(csv.reader([lines[at]], delimiter=delimiter, quotechar="'", strict=True),
                 None)
        except csv.Error as error:
            if "unexpected end of data" in str(error):
                return at
    return -1


def line_swallowing_records(lines: list, delimiter: str, first_record_at: int,
                            width: int) -> int:
    """Index of the first record line that opens a double-quoted cell running on over a
    following line that is a record of its own, or -1.

    RFC 4180 lets a quoted cell hold line breaks (a note written ``"rain,\\nheavy"``),
    so a stray ``"`` opening a value or a note cell and another closing one, any number
    of lines later, read the records between as that one cell, and those records were
    lost as a gap without a word (readfuzz54). A multi-line cell is proved harmless where
    no line it runs on over, read alone without quotes, holds at least the header's
    `width` of fields: such a line cannot be a record of the file, only text of the cell.

    Parameters
    ----------
    lines : list of str
        The file's lines, without line ends.
    delimiter : str
        ``[input] delimiter`` (one character, or "whitespace").
    first_record_at : int
        0-based index of the first record line.
    width : int
        The header's count of names (fields of one record).

    Returns
    -------
    int

    References
    ----------
    RFC 4180, section 2 (a quoted field may hold line breaks) (m); Python's ``csv``
    module (``reader.line_num``: the lines read so far) (Python documentation, csv).
    """
    whitespace = delimiter == "whitespace"
    options = ({"delimiter": " ", "skipinitialspace": True} if whitespace
               else {"delimiter": delimiter})
    reader = csv.reader(iter(lines[first_record_at:]), **options)
    while True:
        start = reader.line_num
        try:
            if next(reader, None) is None:
                return -1
        except csv.Error:          # a line the parser read otherwise: judged there
            return -1
        for line in lines[first_record_at + start + 1:first_record_at + reader.line_num]:
            fields = (len(line.split()) if whitespace
                      else len(line.split(delimiter)))
            if fields >= width:
                return first_record_at + start
