"""A value too long to be part of a record: a line of the input that no field reader reads.

A logger that dumps its memory into the file, a binary block written into a text file, or
a file whose line ends were lost (a format that ends its lines in a character the reader
does not know) leave a line holding one value of megabytes. Python's CSV reader refuses a
field longer than its limit (``csv.field_size_limit()``, 131 072 characters by default)
with ``_csv.Error``, which ended ``run`` with a traceback after pandas had read the line
(a 100 MB line: faults36). No quantity of a tower record is written in that many
characters, so the reader refuses such a line by its number before parsing.
"""

from __future__ import annotations

import csv
import re

from .errors import InputFileError

#: The line boundaries of :meth:`str.splitlines`.
_LINE_BOUNDARY = re.compile("[\n\r\v\f\x1c\x1d\x1e\x85\u2028\u2029]")


def _may_hold_longer_line(text: str, limit: int) -> bool:
    """False where no line of `text` (as :meth:`str.splitlines` splits it) is longer than
    `limit` characters, found without splitting the whole text (round speed53: the split
    and the loop over its lines took 18 ms of a ten-year file, 1.4 ms of a year).

    A line of more than `limit` characters covers a whole block of ``limit // 2``
    characters of the text aligned at a multiple of that length (any stretch of
    ``2 * (limit // 2) - 1`` characters or more does): where every such block holds a line
    boundary, no line is that long. True where a block holds none (a line of half the
    limit or more: the caller then measures every line).
    """
    block = max(limit // 2, 1)
    return any(_LINE_BOUNDARY.search(text, start, start + block) is None
               for start in range(0, len(text) - block + 1, block))


def refuse_overlong_value(path, text: str, delimiter: str, whitespace: str) -> None:
    """Raise :class:`InputFileError` naming the first line of `text` holding a value longer
    than Python's CSV field limit.

    Parameters
    ----------
    path : path-like
        The input file, for the message.
    text : str
        The file's decoded text.
    delimiter : str
        The field delimiter; `whitespace` for fields separated by runs of blanks.
    whitespace : str
        The reader's name of the whitespace delimiter.

    Raises
    ------
    InputFileError
        Where a line holds a value of more than ``csv.field_size_limit()`` characters
        (its line number, length and first characters named).

    References
    ----------
    .. [1] Python Software Foundation. csv — CSV File Reading and Writing,
       ``csv.field_size_limit`` (default 131 072 characters) (m).
    """
    limit = csv.field_size_limit()
    if len(text) <= limit:                  # no line can hold such a value
        return
    if not _may_hold_longer_line(text, limit):
        return
    for number, line in enumerate(text.splitlines(), start=1):
        if len(line) <= limit:
            continue
        longest = max(map(len, line.split() if delimiter == whitespace
                          else line.split(delimiter)))
        if longest > limit:
            raise InputFileError(
                f"input file {str(path)!r}: line {number} holds a value of {longest:,} "
                f"characters ({longest / 2 ** 20:.1f} MiB) with no delimiter or line "
                f"break, beginning {line.strip()[:20]!r}: not part of a record (a logger's "
                "memory or binary data written into the file, or line ends the reader "
                "does not know); delete the line in a copy of the file")
