"""A site flag whose ``flag_accept`` keeps every value it holds: it rejects no record.

A quality flag is mapped so that its bad records leave the budget. A ``flag_accept``
copied from a site of another scheme (``[0, 1]`` of a 0/1/2 scheme read on a flag of 0
good / 1 bad, or ``[0, 2]``, ``[0, 1, 2]``) lists every value the file holds, and the
records the site's own processing rejected enter the gap filling and both partitionings
as measured, without a word (round mistakes61: on a generated hourly grassland year whose
5 % flagged records carry a noise of 8 µmol m-2 s-1, annual NEE moved by 2.7 times its
stated 1 sigma; 0.6-0.9 sigma at three other generated sites). Where a flag column holds
two values or more over the records with an NEE value and every one of them is kept,
the flag is named with its values and counts. One value alone (a site whose flag marks
every record good) is not named: there is nothing it could have rejected.

A scheme whose third value is absent from the file (0/1/2 read with ``[0, 1]``, no 2
written in the year) is named too, and rightly kept as it is: the message says what the
flag keeps and asks the user to judge it, it changes no number.

References
----------
Common practice of flux networks' quality flags: a flag of a few classes (0 best, 1
usable, 2 rejected), each site choosing the classes that enter its budget (m).
"""
from __future__ import annotations

import numpy as np

__all__ = ["keeps_every_value"]

#: Distinct values a flag column must hold over the records with NEE to be judged [1]:
#: two, the fewest a flag can tell a good record from a bad one by.
MIN_VALUES = 2


def keeps_every_value(flags, names, nee, rejected, accept, shown=None) -> str | None:
    """The warning for flag columns of which none rejects a record with NEE, or None.

    Parameters
    ----------
    flags : sequence of numpy.ndarray
        Each flag column's values as read (codes of words for a flag written as words),
        NaN where empty, aligned with `nee`.
    names : sequence of str
        The flag columns' names in the file.
    nee : numpy.ndarray
        The NEE values [µmol m-2 s-1], NaN where missing.
    rejected : numpy.ndarray
        The combined flag (1 where any flag column rejects the record, 0 where all keep
        it, NaN where none is present).
    accept : sequence
        ``[input] flag_accept`` as given.
    shown : callable, optional
        Text of a flag value (a word for a coded word); ``"%g"`` of the number if None.

    Returns
    -------
    str or None
        Named where no record with an NEE value is rejected and a flag column holds at
        least :data:`MIN_VALUES` distinct values over those records.
    """
    measured = np.isfinite(np.asarray(nee, dtype=float))
    if not measured.any() or np.any(np.asarray(rejected)[measured] == 1):
        return None
    shown = shown or (lambda value: f"{value:g}")
    held = []
    for name, values in zip(names, flags, strict=True):
        values = np.asarray(values, dtype=float)[measured]
        values = values[np.isfinite(values)]
        distinct, counts = np.unique(values, return_counts=True)
        if distinct.size >= MIN_VALUES:
            held.append(f"{name!r} holds " + ", ".join(
                f"{shown(v)} in {n} record(s)" for v, n in zip(distinct[:6], counts[:6],
                                                                strict=True)))
    if not held:
        return None
    listed = "[" + ", ".join(repr(v) if isinstance(v, str) else f"{v:g}" for v in accept) + "]"
    return (f"nee_flag: [input] flag_accept = {listed} keeps every value of the flag where "
            f"NEE has a value ({'; '.join(held)}): the flag rejects no record, and the "
            "records the site's own processing marked bad enter the gap filling and the "
            "partitionings as measured; if one of these values marks a record to reject "
            "(a scheme of 0 good and 1 or 2 bad), leave it out of flag_accept")
