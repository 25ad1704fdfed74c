"""Cells written as a spreadsheet's text formula: ``="0.329"``.

A script or an export that feeds a spreadsheet writes a cell as the formula ``="..."``
so that the program shows its text as written, without reformatting it (a stamp
``202101010030`` kept from becoming ``2.02101E+11``, a leading zero kept, a value kept
from becoming a date). The formula's value is the text between its quotes, and so is
the cell's meaning. Such a cell opens with ``=`` before its quote, so a CSV reader
takes the quotes for part of the text (RFC 4180 quotes a field only where the quote
opens it): every stamp failed to parse and every value was "not a number" (round
layouts52). :func:`without_text_formulas` writes each such cell as the quoted field it
means, the ``=`` dropped, with a reader note. A cell only where the whole field is
the formula: ``=`` then one quoted text without a quote inside, between delimiters
or line ends; any other formula (``=A2*2``, ``="a"&"b"``) is left as written, and
judged (and refused) as any other text.

References
----------
RFC 4180 (2005), Common Format and MIME Type for Comma-Separated Values (CSV) Files,
section 2, rules 5-7 (a field is quoted where a double quote opens it) (m); ECMA-376
Part 1, 18.17 Formulas: a formula opens with "=", a string literal is in double quotes
(m); the ``="..."`` cell to keep a spreadsheet from reformatting text is common practice.
"""
from __future__ import annotations

import bisect
import re

#: Characters that may separate fields: a delimiter the reader takes (comma, semicolon,
#: tab, pipe) or a blank of a whitespace-separated file.
_SEPARATORS = ",;\t| "
#: One whole field written ="text": opened by a line start or a separator, closed by a
#: separator or a line end, no quote and no line break inside. A line ends at LF, CRLF
#: or a CR alone (a classic Mac OS file, which the reader reads; review82: ``(?m)^`` and
#: ``$`` know LF only, so such a file's first and last cells kept their "=").
_FORMULA_CELL = re.compile(
    rf'(^|[\r\n{_SEPARATORS}])="([^"\r\n]*)"(?=[\r\n{_SEPARATORS}]|$)')
#: a line break: LF, CRLF or CR alone
_LINE_BREAK = re.compile(r"\r\n|\r|\n")


def without_text_formulas(text: str) -> tuple[str, int]:
    """`text` with each cell ``="..."`` written as the quoted field ``"..."``, and the
    number of lines that held one.

    Parameters
    ----------
    text : str
        A decoded input file.

    Returns
    -------
    tuple of (str, int)
        The text (the same object where no cell is a text formula; each line keeps its
        place, so line numbers are unchanged) and how many lines held such a cell.

    References
    ----------
    RFC 4180, section 2 (m); ECMA-376 Part 1, 18.17 (m) (module docstring).
    """
    if '="' not in text:
        return text, 0
    starts = []

    def unwrapped(match: re.Match) -> str:
        starts.append(match.start(2) - 2)          # the "=" of the cell
        return f'{match.group(1)}"{match.group(2)}"'

    found = _FORMULA_CELL.sub(unwrapped, text)
    if not starts:
        return text, 0
    breaks = [m.start() for m in _LINE_BREAK.finditer(text)]
    return found, len({bisect.bisect_left(breaks, start) for start in starts})
