"""A record number mapped as the site's quality flag (round newuser57).

Logger files often carry a record number beside the stamp (a counter the logger adds one
to per record). Mapped as ``nee_flag`` (a newcomer taking it for the quality column), it
rejects every record but the one numbered as ``flag_accept`` lists, and the reader's
message listed the flag's first ten values, ``['0', '1', ..., '9']``, as if the column
held ten codes. This names the count of distinct values and, where whole values grow from
record to record, says the column is a record number, not a flag.
"""
from __future__ import annotations

import numpy as np

__all__ = ["many_values_text"]

#: Distinct values beyond which a column is no code list: a quality flag holds a few
#: classes (0-2, 0-9, a bit field of some dozens); the messages show ten.
_SHOWN = 10
#: Share of consecutive records (of those given: all, or those with an NEE value) whose
#: value is above the one before, from which whole values count records (our choice: a
#: counter resets at a logger restart, rarely more often than one record in ten; a
#: quality flag repeats its few classes and never grows so).
_COUNTING_SHARE = 0.9


def many_values_text(flags: list, names: list | None = None) -> str:
    """A clause on flag columns holding more values than a message shows, else ''.

    Parameters
    ----------
    flags : list of numpy.ndarray
        Each mapped flag column's values per record, as numbers (NaN where missing or a
        word).
    names : list of str, optional
        The columns' names in the file: where more than one column is mapped, the
        counting one is named, and the fix is to leave it out of ``nee_flag`` (review95:
        with a quality column beside it, the clause named no column and said to map the
        quality flag, which was mapped).

    Returns
    -------
    str
        "N different values" where a column holds more than ten, with "growing from
        record to record: a record number, not a quality flag" where one does.

    References
    ----------
    Common practice: logger tables carry a record number that grows by one per stored
    record beside the stamp.
    """
    values = [np.asarray(flag, dtype=float) for flag in flags]
    distinct = max((np.unique(v[np.isfinite(v)]).size for v in values), default=0)
    if distinct <= _SHOWN:
        return ""
    text = f"{distinct} different values"
    for position, flag in enumerate(values):
        held = flag[np.isfinite(flag)]
        steps = np.diff(held)
        if (steps.size >= 2 * _SHOWN and np.all(held == np.round(held))
                and np.mean(steps > 0) >= _COUNTING_SHARE):
            if names is not None and len(names) > 1:
                return (f"column {names[position]!r} holds {np.unique(held).size} "
                        "different values, growing from record to record: a record number, "
                        "not a quality flag; leave it out of nee_flag")
            return (f"{distinct} different values, growing from record to record: a "
                    "record number, not a quality flag; map the site's quality flag column "
                    "as nee_flag, or none")
    return text
