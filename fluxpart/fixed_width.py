"""Fields of a blank-separated file that run together: fixed-width columns.

A file of fixed-width columns pads each value or name with blanks to its column's width.
Read with ``[input] delimiter = "whitespace"`` it splits right wherever a blank stands
between every two fields; where a value fills its width (a minus sign, a missing code
such as -9999.0, a large Rg) or a name fills its width, it touches its neighbour and
the two are read as one field. Such a line was named a record with an empty value or
cut short, and such a header a header lacking a name (round layouts35). The functions
here name the fields that run together, for the reader's refusals, and cut the lines of
a file at the widths ``[input] column_widths`` declares, which reads such a file.

References
----------
Fixed-width ("column-aligned") text tables, as FORTRAN formatted output (``F7.3``) and
logger exports write them, leave no delimiter between a value that fills its field and
the next (common practice).
"""
from __future__ import annotations

import re

from .errors import InputFileError

__all__ = ["cut_names_message", "delimited", "fused_header_names", "run_together_field"]

#: One number followed at once by a signed one ("202101010200-9999.0", "0.516-7.46"),
#: or a number with two decimal points ("0.5161013.2"): two numbers run together
_RUN_TOGETHER = re.compile(r"[+-]?\d*\.?\d+(?:[eE][+-]?\d+)?[+-]\d|[+-]?\d*\.\d+\.\d")
#: A date ("2021-01-01", "01.02.2021", "2021.01.02"), one field of a split time column
_DATE = re.compile(r"\d{1,4}[./-]\d{1,2}[./-]\d{1,4}")


def run_together_field(line: str) -> str | None:
    """The first blank-separated field of `line` that holds two numbers run together.

    Parameters
    ----------
    line : str
        A data line of a file read with ``delimiter = "whitespace"``.

    Returns
    -------
    str or None
        The field (e.g. ``"202101010200-9999.0"``), or None where every field is one
        number or text.

    References
    ----------
    Common practice of fixed-width exports (module docstring).
    """
    for field in line.split():
        if (re.fullmatch(r"[+-]?[0-9eE.+-]+", field) and _RUN_TOGETHER.match(field)
                and not _DATE.fullmatch(field)):
            return field
    return None


def fused_header_names(header_line: str, data_line: str) -> list[str]:
    """Header cells over which a data line has a field boundary: names run together.

    Parameters
    ----------
    header_line, data_line : str
        The header and the first data line of a blank-separated file, as written.

    Returns
    -------
    list of str
        The header's blank-separated cells (``"co2_exchangesolar_down"``) over which two
        or more of the data line's fields stand (its columns aligned: a name that fills
        its width touches the next name), where the header's cells so split hold as many
        names as the data line has fields; else empty.

    References
    ----------
    Common practice of fixed-width exports (module docstring).
    """
    fields = [(m.start(), m.end()) for m in re.finditer(r"\S+", data_line)]
    cells = [(m.group(), sum(start < m.end() and m.start() < end for start, end in fields))
             for m in re.finditer(r"\S+", header_line)]
    if sum(max(count, 1) for _, count in cells) != len(fields):
        return []
    return [cell for cell, count in cells if count >= 2]


def delimited(path, text: str, widths: tuple, rows_before_header: int) -> str:
    """A fixed-width table's text with its fields cut at the declared widths, tab-joined.

    Parameters
    ----------
    path : str or path-like
        The file, for messages.
    text : str
        The file's text.
    widths : tuple of int
        ``[input] column_widths``: characters of each column, left to right; text beyond
        their sum is one more field (the reader names a line holding more fields than
        the header).
    rows_before_header : int
        Lines above the header (a title, metadata), left as they are.

    Returns
    -------
    str
        The same lines, each cut into fields with blanks stripped, joined by tabs; a
        line ending inside the k-th column holds k fields, so a record cut short stays
        short (a last value left blank needs the line's trailing blanks); blank lines
        stay blank.

    Raises
    ------
    InputFileError
        Where a line below the header block holds a tab, which no fixed-width column
        holds and which would split a field.

    References
    ----------
    Common practice of fixed-width exports (module docstring).
    """
    edges = [0]
    for width in widths:
        edges.append(edges[-1] + width)
    lines = text.splitlines(keepends=True)
    cut = lines[:rows_before_header]
    for number, line in enumerate(lines[rows_before_header:], start=rows_before_header + 1):
        body = line.rstrip("\r\n")
        if "\t" in body:
            raise InputFileError(
                f"input file {str(path)!r}: line {number} holds a tab, which a file of [input] column_widths (fixed "
                "widths) does not: set [input] delimiter = \"\\t\" if tabs separate its "
                "fields, or replace the tabs by blanks in a copy of the file")
        if not body.strip():
            cut.append(line)
            continue
        cells = [body[start:end].strip() for start, end in zip(edges[:-1], edges[1:],
                                                                strict=True)
                 if start < len(body)]
        rest = body[edges[-1]:].strip()
        cut.append("\t".join([*cells, rest] if rest else cells) + line[len(body):])
    return "".join(cut)


#: A run of two or more blanks between two non-blank characters: the padding between two
#: names of a fixed-width header, which no cell of rightly declared widths holds
_PADDING_INSIDE = re.compile(r"\S\s{2,}\S")


def cut_names_message(header_line: str, data_line: str, widths: tuple) -> str:
    """Where ``[input] column_widths`` cut the header inside its names, what the widths
    look like and the widths the file's own layout gives, else "".

    Parameters
    ----------
    header_line, data_line : str
        The header and the first record line of the file, as written (not yet cut).
    widths : tuple of int
        ``[input] column_widths``.

    Returns
    -------
    str
        "" unless some header cell cut at `widths` holds a run of blanks between two
        names' parts (the padding between columns inside one cell: a width off by a
        character or more moves every cut after it). The message names those cells
        and, where every name of the header and every field of the record end at the
        same characters (right-aligned columns as many as `widths`), the widths those
        ends give.

    References
    ----------
    Common practice of fixed-width exports (module docstring): each column padded with
    blanks to its width, names and values aligned alike.
    """
    edges = [0]
    for width in widths:
        edges.append(edges[-1] + width)
    cells = [header_line[start:end] for start, end in zip(edges[:-1], edges[1:], strict=True)]
    cut = [cell.strip() for cell in cells if _PADDING_INSIDE.search(cell.strip())]
    if not cut:
        return ""
    shown = ", ".join(repr(cell) for cell in cut[:3])
    message = (f"[input] column_widths = {list(widths)} cut the header inside its names "
               f"({len(cut)} cell(s) hold the end of one name and the start of the next: "
               f"{shown}): a width is off, which moves every cut after it")
    ends = [m.end() for m in re.finditer(r"\S+", header_line)]
    if (len(ends) == len(widths)
            and ends == [m.end() for m in re.finditer(r"\S+", data_line)]):
        own = [b - a for a, b in zip([0, *ends[:-1]], ends, strict=True)]
        message += (f"; the header's names and the first record's fields end at the same "
                    f"characters, which give column_widths = {own}")
    return message
