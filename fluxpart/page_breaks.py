"""Page breaks of a printed or paged export: a form feed opening a line.

A program that pages its output for a printer or a terminal (a logger's "print to file",
an old report writer) starts each page with the form feed, FF (U+000C, ASCII 12, the
page-break control of ISO/IEC 6429 and ECMA-48 (m)), usually before the header it writes
again at the top of the page. The character holds no data: a line it opens is that line
on a new page. Python's ``str.splitlines`` ends a line at it where the CSV parser does
not, so the reader's line numbers and its search for the header written again (a page's
header read past as a restart's is, :mod:`fluxpart.interleaved_lines`) would disagree:
the form feeds opening lines are dropped, with a reader note (round layouts49; refused
before as a header repeated "after a restart"). A form feed within a line stays and is
judged where it stands.

References
----------
ECMA-48 (1991), Control Functions for Coded Character Sets, 5th ed., section 8.3.51
FF - FORM FEED (m).
"""
from __future__ import annotations

import re

#: One or more form feeds at the start of the text or right after a line break.
_OPENING_FEEDS = re.compile("(?:^|(?<=[\r\n]))\f+")


def without_page_breaks(text: str) -> tuple[str, int]:
    """`text` without the form feeds that open its lines, and how many lines had one.

    Parameters
    ----------
    text : str
        A decoded text table.

    Returns
    -------
    tuple of (str, int)
        The text as it reads without page breaks (each line's content unchanged, no line
        added or removed), and the count of lines a form feed opened (0: `text` itself).

    Examples
    --------
    >>> without_page_breaks("a,b\\n1,2\\n\\fa,b\\n3,4\\n")
    ('a,b\\n1,2\\na,b\\n3,4\\n', 1)
    """
    if "\f" not in text:                      # one C pass: most files stop here
        return text, 0
    count = len(_OPENING_FEEDS.findall(text))
    return (_OPENING_FEEDS.sub("", text), count) if count else (text, 0)
