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

from .errors import InputFileError


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
