"""Civil-time files cut inside the hour that clocks repeat when daylight saving ends.

Each file's stamps are read on their own, and a stamp the autumn repeats is read as
summer time where it first occurs in its file (record order). A logger that closed one
file and opened the next inside the repeated hour (a restart, a file cut by size) leaves
the second pass's first stamps at the head of the next file, where they read as summer
time a second time and collide with the previous file's summer pass. Read across the
files in time order, they are the second pass: this moves them to standard time.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["second_pass_head"]


def second_pass_head(earlier, later, time_zone: str, utc_offset: float) -> tuple[int, float]:
    """How many leading stamps of `later` are the repeated hour's second pass read as its
    first, and the hours they move by (the zone's daylight-saving step); ``(0, 0.0)``
    where none.

    Parameters
    ----------
    earlier, later : array of datetime64
        Local standard time stamps (UTC + `utc_offset`) of two files, `earlier` the file
        whose records come first, each as read on its own from civil time.
    time_zone : str
        The IANA zone of the civil stamps.
    utc_offset : float
        The zone's standard offset [h].

    Returns
    -------
    tuple
        The count of leading stamps and the step [h]. Counted are the leading stamps read
        as the first (summer) pass of a repeated hour that `earlier` also holds, and only
        where, moved by the step, none of them is in `earlier` and they still precede the
        rest of `later`.

    References
    ----------
    Civil time repeats one hour when daylight saving ends (a fact of the trade); the
    first pass is the daylight-saving one (IANA time zone database, through Python's
    zoneinfo).
    """
    earlier = pd.DatetimeIndex(np.asarray(earlier, dtype="datetime64[ns]"))
    later = pd.DatetimeIndex(np.asarray(later, dtype="datetime64[ns]"))
    if not len(earlier) or not len(later):
        return 0, 0.0
    utc = (later - pd.Timedelta(hours=float(utc_offset))).tz_localize("UTC")
    civil = utc.tz_convert(time_zone)
    naive = civil.tz_localize(None)
    repeated = naive.tz_localize(time_zone, ambiguous="NaT", nonexistent="NaT").isna()
    # hours ahead of standard time: daylight saving where positive
    ahead = np.asarray((naive - later) / pd.Timedelta(hours=1), dtype=float)
    candidate = repeated & (ahead > 0) & later.isin(earlier)
    head = len(candidate) if candidate.all() else int(np.argmin(candidate))
    if not head:
        return 0, 0.0
    step = float(ahead[0])
    moved = later[:head] + pd.Timedelta(hours=step)
    if moved.isin(earlier).any() or (head < len(later) and moved[-1] >= later[head]):
        return 0, 0.0
    return head, float(step)
