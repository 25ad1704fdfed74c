"""Stamps written to a finer place than the time format: seconds or fractions of zero.

Databases and many loggers write every stamp to the second or the millisecond
("2021-06-01 13:30:00.000") while a user copies the format from the file's first look
or from another file of the station ("%Y-%m-%d %H:%M:%S", "%Y-%m-%d %H:%M"). Where every
stamp's extra place is zero it states nothing the format does not read, so it is read
past: a fraction of zeros after a format ending in ``%S``, and ``:00`` (with or without
a fraction of zeros) after one ending in ``%M``. Any other tail (seconds that vary, a
fraction that is not zero) is left for the reader, which names the format to set.
"""
from __future__ import annotations

import pandas as pd

#: the tail read past after a format's last field, and the form every stamp must have
_TAILS = {"%S": (r"[.,]0+$", r".*\d:\d{2}:\d{2}[.,]0+"),
          "%M": (r":00(?:[.,]0+)?$", r".*\d:\d{2}:00(?:[.,]0+)?")}


def zero_tails(text: pd.Series, time_format: str) -> tuple[pd.Series, int]:
    """Stamps whose place beyond the format's last field is zero, without it.

    Parameters
    ----------
    text : pandas.Series of str
        Stamp text per record.
    time_format : str
        ``[input] time_format`` (a strptime format).

    Returns
    -------
    text : pandas.Series of str
        The stamps without the zero tail; `text` itself where the format ends in
        neither ``%S`` nor ``%M`` or any stamp but a blank one lacks such a tail.
    count : int
        Stamps rewritten (0 where none).

    References
    ----------
    ISO 8601-1:2019, section 5.3.1.4: a time of day may be written to a lower order
    component, 13:30:00.000 and 13:30 naming the same minute (m).
    """
    ending = time_format.rstrip()[-2:]
    if ending not in _TAILS or text.empty:
        return text, 0
    tail, form = _TAILS[ending]
    stripped = text.str.strip()
    tailed = stripped.str.fullmatch(form).to_numpy(dtype=bool)
    # blank stamps (a record without one) are the reader's to name, not another form
    if not tailed.any() or not (tailed | (stripped == "").to_numpy()).all():
        return text, 0
    return stripped.str.replace(tail, "", regex=True), int(tailed.sum())
