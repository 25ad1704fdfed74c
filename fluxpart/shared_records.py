"""Sites of a network whose measured NEE is the same, value for value (round mistakes27).

A batch already names sites computed from the same input file (the same SHA-256). The
same records in files of other bytes pass it: a tower's file opened and saved again by a
spreadsheet, re-exported with other digits or columns, or copied into a second tower's
folder under the second tower's name. The network tables then hold one tower's budget
twice, the second under another tower's name and place, and no tower's own. A measured
flux carries a random error of tens of percent in every half-hour (Richardson et al. 2006
(m)), so two towers, even side by side over one field, never write the same NEE to the
fourth decimal record after record; whole days of such values at the same stamps are
one record read twice.

References
----------
Richardson, A. D., Hollinger, D. Y., Burba, G. G., et al. (2006). A multi-site analysis
of random error in tower-based measurements of carbon and energy fluxes. Agricultural and
Forest Meteorology 136:1-18. doi:10.1016/j.agrformet.2006.01.007 (m)
"""
from __future__ import annotations

import hashlib
from collections import Counter
from itertools import combinations

import numpy as np
import pandas as pd

__all__ = ["MIN_SHARED_DAYS", "day_keys", "shared_days"]

#: Present NEE values a day needs to be compared [records]: eight, the run of values by
#: which the repeated-NEE check (:mod:`fluxpart.preflight`) keys a record. Two towers'
#: values agree at a record's resolution now and then; eight in one day, each to the
#: fourth decimal, do not.
_MIN_VALUES_PER_DAY = 8
#: Distinct values a day needs to be compared [1]: a winter day of fluxes near 0 written
#: to whole µmol m-2 s-1 reads 0, 0, 1, 0 ... at any tower, so two towers' days of one or
#: two values may agree by chance; five distinct values, as the rule of one sensor
#: written under two headers asks (:func:`fluxpart.column_faults.same_temperature_columns`),
#: do not.
_MIN_DISTINCT = 5
#: Decimals of µmol m-2 s-1 compared [1]: a file read in another unit (mg CO2 converted)
#: and written again keeps its values to far more than this, while 1e-4 µmol m-2 s-1 lies
#: four orders below a flux's random error (Richardson et al. 2006 (m)).
_DECIMALS = 4
#: Days of identical measured NEE that name two sites [days]. Our choice: a day or two
#: of overlap is one tower's record split into configs per period that share their
#: boundary day. Independent towers cannot agree for days; the invented demo's two
#: variants of one seed, whose winter respiration shares its temperatures and its random
#: draws, agreed on up to 2 winter days written to whole µmol m-2 s-1 (of 300 generated
#: site-years, each at 4, 2, 1 and 0 decimals), so a week keeps a margin.
MIN_SHARED_DAYS = 7


def day_keys(time, nee) -> dict[bytes, pd.Timestamp]:
    """A digest of each day's measured NEE, with its stamps, mapped to the day.

    Parameters
    ----------
    time : array_like of datetime64
        Interval starts of the records (local standard time).
    nee : array_like
        Measured NEE of each record [µmol m-2 s-1], NaN where missing.

    Returns
    -------
    dict
        SHA-256 digest -> day, for each day with at least eight present values of at
        least five distinct values: the digest of their stamps and of their values
        rounded to four decimals.

    References
    ----------
    FIPS PUB 180-4 (2015), Secure Hash Standard: SHA-256, whose digests of two
    different inputs agree only by a collision (m). Richardson, A. D. et al. (2006),
    Agricultural and Forest Meteorology 136:1-18: a measured flux's random error of
    tens of percent per half-hour, far above the rounding to four decimals (m).
    """
    stamps = pd.DatetimeIndex(pd.to_datetime(np.asarray(time)))
    values = np.asarray(nee, dtype=float)
    if values.size == 0 or values.size != len(stamps):
        return {}
    present = np.isfinite(values)
    stamps, values = stamps[present], values[present]
    if values.size == 0:
        return {}
    rounded = np.round(values, _DECIMALS) + 0.0            # -0.0 as 0.0
    ticks = np.asarray(stamps.asi8, dtype=np.int64)
    days = stamps.normalize()
    day_ticks = np.asarray(days.asi8)
    starts = np.flatnonzero(np.concatenate([[True], day_ticks[1:] != day_ticks[:-1]]))
    ends = np.concatenate([starts[1:], [day_ticks.size]])
    keys = {}
    for start, end in zip(starts, ends, strict=True):
        if (end - start < _MIN_VALUES_PER_DAY
                or np.unique(rounded[start:end]).size < _MIN_DISTINCT):
            continue
        digest = hashlib.sha256(ticks[start:end].tobytes() + rounded[start:end].tobytes())
        keys[digest.digest()] = days[start]
    return keys


def shared_days(sites: dict) -> list[tuple[tuple[str, str], int, pd.Timestamp, pd.Timestamp]]:
    """Pairs of sites with at least :data:`MIN_SHARED_DAYS` days of identical NEE.

    Parameters
    ----------
    sites : dict
        Site key -> the dict of :func:`day_keys` of its measured NEE.

    Returns
    -------
    list of tuple
        ``((key_a, key_b), days, first day, last day)`` per pair, in the order of the
        keys given.

    References
    ----------
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136:1-18: two towers' independent random errors make days of identical
    NEE one record read twice (m).
    """
    holders: dict[bytes, list[str]] = {}
    for key, keys in sites.items():
        for digest in keys:
            holders.setdefault(digest, []).append(key)
    counts: Counter = Counter()
    spans: dict[tuple[str, str], list] = {}
    for digest, members in holders.items():
        if len(members) < 2:
            continue
        day = sites[members[0]][digest]
        for pair in combinations(members, 2):
            counts[pair] += 1
            span = spans.setdefault(pair, [day, day])
            span[0], span[1] = min(span[0], day), max(span[1], day)
    return [(pair, count, spans[pair][0], spans[pair][1])
            for pair, count in counts.items() if count >= MIN_SHARED_DAYS]
