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


def unmarked_first_name(file_names: list, wanted) -> dict:
    """``{marked: name}`` for a first column named a setting's name after a comment mark.

    Parameters
    ----------
    file_names : list of str
        The file's column names as read, the first the header line's first cell.
    wanted : iterable of str
        Every name the settings give (mapped, time and flag columns, other names).

    Returns
    -------
    dict
        One entry where the first name is a mark of :data:`HEADER_MARKS`, blanks and a
        name of `wanted` that the file lacks, and the marked name itself is no setting's;
        else empty (the usual file).

    References
    ----------
    NumPy documentation, ``numpy.savetxt``: ``header`` is written after ``comments``,
    default ``"# "`` (m).
    """
    if not file_names or not isinstance(file_names[0], str):
        return {}
    first = file_names[0]
    mark = next((mark for mark in HEADER_MARKS if first.startswith(mark)), None)
    wanted = {name for name in wanted if isinstance(name, str)}
    if mark is None or first in wanted:
        return {}
    name = first[len(mark):].strip()
    if not name or name not in wanted or name in file_names:
        return {}
    return {first: name}


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
