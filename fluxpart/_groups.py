"""The records of each period of a record, found by one sort instead of one pass per period.

A check that loops over the months (or weeks, or years) of a record and selects each
one's records with ``codes == code`` passes over the whole record once per period: on
ten years of half-hourly records (175,200 records, 120 months) that is 21 million
comparisons per loop, and the cost grows with the square of the record's length.
:func:`group_positions` sorts the codes once, stably, so each period's positions come
out in increasing order: ``values[positions]`` holds the same values in the same order
as ``values[codes == code]``, and every statistic taken of it has the same bits.

References
----------
Knuth, D. E. (1998). The Art of Computer Programming, vol. 3: Sorting and Searching,
2nd ed. Addison-Wesley, section 5.1 (a sort is stable where records of equal keys keep
their order) (m).
"""

from __future__ import annotations

import numpy as np

__all__ = ["group_positions"]


def group_positions(codes, where=None) -> dict:
    """The positions of each distinct code, in increasing order.

    Parameters
    ----------
    codes : array_like
        One period code per record (integers, or any values NumPy sorts, e.g.
        ``datetime64`` or a pandas ``Period`` array's ordinals).
    where : array_like of bool, optional
        Only the records marked True are counted; by default all.

    Returns
    -------
    dict
        ``code -> numpy.ndarray of int`` (positions into `codes`), the codes in
        ascending order (the order of :func:`numpy.unique`); a code none of whose
        records is selected is absent. For every code ``c`` the positions equal
        ``numpy.flatnonzero((codes == c) & where)``.

    Notes
    -----
    One stable sort of the selected codes (O(n log n)) instead of one comparison of the
    whole record per code (O(n × codes)).

    References
    ----------
    Knuth, D. E. (1998). The Art of Computer Programming, vol. 3, section 5.1 (m).
    """
    codes = np.asarray(codes)
    chosen = np.arange(codes.size) if where is None else np.flatnonzero(where)
    if chosen.size == 0:
        return {}
    selected = codes[chosen]
    order = np.argsort(selected, kind="stable")
    ordered = selected[order]
    bounds = np.flatnonzero(ordered[1:] != ordered[:-1]) + 1
    starts = np.concatenate(([0], bounds))
    ends = np.concatenate((bounds, [ordered.size]))
    positions = chosen[order]
    return {ordered[start].item(): positions[start:end]
            for start, end in zip(starts, ends, strict=True)}
