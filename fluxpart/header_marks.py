"""A header line written as a comment: its first name opened by a comment mark.

Programs that write a table with a header often open the header line with a comment mark
so that readers of plain numbers skip it: ``# stamp,co2_net,...`` (NumPy's ``savetxt``
writes its ``header`` after ``"# "`` by default; MATLAB and Octave users write ``%``).
Read as a table, the first column is named ``"# stamp"``, and a setting naming
``"stamp"`` found no such column (layouts43; refused before with "did you mean
'# stamp'?"). The mark belongs to the line, not to the name: where the name after it is
the one a setting gives and the marked name is none, the column is that name.
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
