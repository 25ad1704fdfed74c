"""Pieces of a record between declared events, for the partitionings' running windows.

A harvest, cut, fire or thinning (``Config.events``) changes the ecosystem within a
day: the canopy's light response and the autotrophic part of respiration before it say
nothing about the days after it. Gap filling already fills each piece of the record
between events from its own records (:func:`fluxpart.gapfill.event_breaks`); the
functions here do the same for the windows of the nighttime and daytime methods:

- a window takes the records of one piece only, the piece holding its centre
  (:func:`centre_piece_windows`, the daytime method's overlapping windows), or the
  consecutive windows are cut at the events, a fragment shorter than half a window
  joined to its neighbour within the same piece (:func:`cut_windows`, the nighttime
  method's Rref windows);
- a record takes parameters only from windows of its own piece, interpolated between
  their centres and constant beyond the piece's first and last centre
  (:func:`piece_interp`, :func:`piece_neighbours`);
- a piece without a window in use of its own (shorter than its windows need, or
  without enough measured NEE) takes the windows on either side of it as if the
  events bounding it were not declared, and is named (:func:`window_notes`).

Break positions are those of :func:`fluxpart.gapfill.event_breaks` (record ``p`` and
later lie after the event). Every function is pure; with no breaks each returns its
input's plain (unbroken) result, so runs without events are unchanged.

References
----------
Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439 (the nighttime
method's 4-day Rref windows, interpolated between centres).

Lasslop, G. et al. (2010). Global Change Biology 16:187–208 (the daytime method's
4-day windows moved by 2 days).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = [
    "break_times",
    "centre_piece_windows",
    "cut_windows",
    "piece_interp",
    "piece_neighbours",
    "piece_of",
    "pieces_without_windows",
    "window_notes",
]


def break_times(times, breaks) -> np.ndarray:
    """The times at which a new piece of the record starts.

    Parameters
    ----------
    times : numpy.ndarray
        Record start times on any increasing numeric axis (e.g. days or seconds since
        an origin) [days or s].
    breaks : array_like of int or None
        Record positions where an event starts a new piece (:func:`fluxpart.gapfill.
        event_breaks`); positions outside ``0 < p < len(times)`` are ignored.

    Returns
    -------
    numpy.ndarray
        Sorted distinct start times of the second and later pieces [as `times`];
        empty where there are no breaks.

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    times = np.asarray(times, dtype=float)
    if breaks is None:
        return np.array([], dtype=float)
    positions = np.unique(np.asarray(breaks, dtype=np.int64).ravel())
    positions = positions[(positions > 0) & (positions < times.size)]
    return times[positions]


def piece_of(values, edges) -> np.ndarray:
    """Piece number of each time.

    Parameters
    ----------
    values : numpy.ndarray
        Times [as `edges`].
    edges : numpy.ndarray
        Start times of the second and later pieces (:func:`break_times`).

    Returns
    -------
    numpy.ndarray of int
        0 for the first piece; a time at an edge lies after it, as a record starting at
        an event's time does.

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    return np.searchsorted(edges, values, side="right")


def _piece_bounds(pieces, edges) -> tuple:
    """Start and (exclusive) end [as `edges`] of each piece number in `pieces`."""
    lower = np.concatenate([[-np.inf], edges])
    upper = np.concatenate([edges, [np.inf]])
    return lower[pieces], upper[pieces]


def centre_piece_windows(starts, ends, edges) -> tuple:
    """Windows cut to the piece holding their centre.

    Parameters
    ----------
    starts, ends : numpy.ndarray
        Window starts and (exclusive) ends [days or s].
    edges : numpy.ndarray
        Start times of the second and later pieces (:func:`break_times`) [as `starts`].

    Returns
    -------
    starts, ends : numpy.ndarray
        The windows clipped to the piece holding their centre ``(start + end) / 2``; a
        window lying in one piece is unchanged. A clipped window keeps at least half
        its length unless its piece is shorter; its centre stays in its piece.

    References
    ----------
    Lasslop, G. et al. (2010). Global Change Biology 16:187–208 (windows of 4 days
    moved by 2 days, whose records this keeps on one side of an event).
    """
    starts = np.asarray(starts, dtype=float)
    ends = np.asarray(ends, dtype=float)
    if len(edges) == 0:
        return starts, ends
    lower, upper = _piece_bounds(piece_of((starts + ends) / 2.0, edges), edges)
    return np.maximum(starts, lower), np.minimum(ends, upper)


def cut_windows(starts, length, edges) -> tuple:
    """Consecutive windows cut at the pieces' edges.

    Parameters
    ----------
    starts : numpy.ndarray
        Starts of consecutive windows of equal `length`, the first at or before the
        first record [days or s].
    length : float
        Window length [as `starts`].
    edges : numpy.ndarray
        Start times of the second and later pieces (:func:`break_times`).

    Returns
    -------
    starts, ends : numpy.ndarray
        Consecutive windows, each within one piece: every window an edge falls in is
        cut there into two. A part shorter than half a window joins the neighbouring
        window of its own piece, and a window so made longer than one and a half windows
        (two events a few windows apart, whose fragments join the one window between
        them) is split into ``round(span / length)`` equal windows, so windows run from
        half to one and a half windows long; a piece shorter than half a window is one
        window.

    Notes
    -----
    A fragment of a few hours would give a window whose Rref rests on one night or
    less: the noise of one night's respiration, anchoring the interpolation at the
    event, where the method's 4 days (Reichstein et al. 2005) average several. The
    half-window rule (our choice) keeps every window of a piece at least as long as
    the half that the centre rule of :func:`centre_piece_windows` keeps.

    References
    ----------
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439 (the 4-day Rref
    windows).
    """
    starts = np.asarray(starts, dtype=float)
    end = float(starts[-1] + length)
    if len(edges) == 0:
        return starts, starts + float(length)
    edges = np.asarray(edges, dtype=float)
    edges = edges[(edges > starts[0]) & (edges < end)]
    grid = starts[1:]
    if edges.size:
        distance = np.abs(grid[:, None] - edges[None, :])
        grid = grid[~((distance < length / 2.0) & (distance > 0)).any(axis=1)]
    cuts = np.unique(np.concatenate([[starts[0]], grid, edges]))
    ends = np.concatenate([cuts[1:], [end]])
    # a piece between two events close together can lose the grid points on both sides
    # (up to two windows long): split it into round(span / length) equal windows
    parts = np.maximum(np.round((ends - cuts) / float(length)), 1.0).astype(np.int64)
    long = (ends - cuts > 1.5 * float(length)) & (parts > 1)
    if long.any():
        extra = [cuts[i] + (ends[i] - cuts[i]) * np.arange(1, parts[i]) / parts[i]
                 for i in np.flatnonzero(long)]
        cuts = np.unique(np.concatenate([cuts, *extra]))
        ends = np.concatenate([cuts[1:], [end]])
    return cuts, ends


def piece_interp(times, centres, values, edges) -> tuple:
    """Linear interpolation between window centres within each piece.

    Parameters
    ----------
    times : numpy.ndarray
        Record times [days or s].
    centres : numpy.ndarray
        Increasing window centres [as `times`].
    values : numpy.ndarray
        The windows' parameter values [any unit].
    edges : numpy.ndarray
        Start times of the second and later pieces (:func:`break_times`).

    Returns
    -------
    interpolated : numpy.ndarray
        Per record, ``numpy.interp`` over the centres of its own piece (constant beyond
        the piece's first and last centre); a record of a piece with no centre takes
        the interpolation over all centres (the pieces beside it) [as `values`].
    borrowed : numpy.ndarray of bool
        Records of pieces with no centre of their own.

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    times = np.asarray(times, dtype=float)
    centres = np.asarray(centres, dtype=float)
    values = np.asarray(values, dtype=float)
    out = np.interp(times, centres, values)
    borrowed = np.zeros(times.size, dtype=bool)
    if len(edges) == 0:
        return out, borrowed
    record_piece = piece_of(times, edges)
    centre_piece = piece_of(centres, edges)
    for piece in np.unique(record_piece):
        own = centre_piece == piece
        rows = record_piece == piece
        if own.any():
            out[rows] = np.interp(times[rows], centres[own], values[own])
        else:
            borrowed[rows] = True
    return out, borrowed


def piece_neighbours(times, centres, edges, neighbours) -> tuple:
    """The windows each record takes its curves from, within its own piece.

    Parameters
    ----------
    times : numpy.ndarray
        Record times [days].
    centres : numpy.ndarray
        Increasing centres of the windows in use [days].
    edges : numpy.ndarray
        Start times of the second and later pieces (:func:`break_times`) [days].
    neighbours : callable
        ``neighbours(times, centres) -> (before, after, share)`` over one stretch of
        centres (the method's own rule).

    Returns
    -------
    before, after : numpy.ndarray of int
        Positions in `centres` of the windows centred before and after each record,
        both of its own piece; a record of a piece with no window centre of its own
        takes those of the whole record (the pieces beside it).
    share : numpy.ndarray
        Time share of `after` [1].

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    times = np.asarray(times, dtype=float)
    before, after, share = neighbours(times, centres)
    if len(edges) == 0:
        return before, after, share
    record_piece = piece_of(times, edges)
    centre_piece = piece_of(centres, edges)
    before, after, share = before.copy(), after.copy(), np.asarray(share, dtype=float).copy()
    for piece in np.unique(record_piece):
        own = np.flatnonzero(centre_piece == piece)
        if own.size == 0:
            continue
        rows = record_piece == piece
        b, a, s = neighbours(times[rows], centres[own])
        before[rows], after[rows], share[rows] = own[b], own[a], s
    return before, after, share


def pieces_without_windows(index, breaks, centres) -> list:
    """Pieces of the record that hold no window centre.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record starts (local standard time).
    breaks : array_like of int or None
        Break positions (:func:`fluxpart.gapfill.event_breaks`).
    centres : pandas.DatetimeIndex or array_like of datetime64
        Centres of the windows in use.

    Returns
    -------
    list of (int, int)
        First and last record position of each piece without a window centre, in
        time order; empty without breaks.

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    if len(index) == 0:
        return []
    origin = index[0]
    times = ((index - origin) / pd.Timedelta(seconds=1)).to_numpy(dtype=float)
    edges = break_times(times, breaks)
    if len(edges) == 0:
        return []
    first = np.concatenate([[0], np.searchsorted(times, edges)])
    last = np.concatenate([first[1:] - 1, [len(index) - 1]])
    centre_times = ((pd.DatetimeIndex(centres) - origin) / pd.Timedelta(seconds=1)).to_numpy(
        dtype=float)
    held = np.unique(piece_of(centre_times, edges))
    return [(int(a), int(b)) for piece, (a, b) in enumerate(zip(first, last, strict=True))
            if piece not in held]


def window_notes(index, breaks, night_windows=None, day_parameters=None) -> list:
    """Warnings for the pieces between events whose records took windows across an event.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record starts (local standard time).
    breaks : array_like of int or None
        Break positions of the run's events (:func:`fluxpart.gapfill.event_breaks`).
    night_windows : pandas.DataFrame, optional
        The nighttime method's retained Rref windows (``window_centre``).
    day_parameters : pandas.DataFrame, optional
        The daytime method's window table (``window_centre``, ``accepted``).

    Returns
    -------
    list of str
        One warning per method with pieces without a window of their own (the piece
        named, or where several, their number and the first three): their records took
        the windows of the pieces beside them (:func:`piece_interp`,
        :func:`piece_neighbours`). Empty without breaks.

    References
    ----------
    Reichstein et al. (2005); Lasslop et al. (2010): see the module docstring.
    """
    notes = []
    tables = (("nighttime", night_windows, None), ("daytime", day_parameters, "accepted"))
    for method, table, used in tables:
        if table is None or not len(table) or "window_centre" not in table.columns:
            continue
        kept = table if used is None or used not in table.columns else \
            table[table[used].to_numpy(dtype=bool)]
        if not len(kept):
            continue
        found = pieces_without_windows(index, breaks, kept["window_centre"])
        spans = [f"from {index[first]:%Y-%m-%d %H:%M} to {index[last]:%Y-%m-%d %H:%M}"
                 for first, last in found]
        if len(found) == 1:
            notes.append(
                f"events: the piece of the record {spans[0]} (interval starts) has no "
                f"{method} window of its own (too short or too few measured NEE records "
                f"between the events); its {method} GPP and Reco take the windows of the "
                "pieces beside it, across the events")
        elif found:
            # one line per method, however many events (daily events gave one per piece)
            shown = "; ".join(spans[:_LISTED_PIECES]) + (
                f"; and {len(found) - _LISTED_PIECES} more" if len(found) > _LISTED_PIECES
                else "")
            notes.append(
                f"events: {len(found)} pieces of the record have no {method} window of their "
                f"own (too short or too few measured NEE records between the events): {shown} "
                f"(interval starts); their {method} GPP and Reco take the windows of the "
                "pieces beside them, across the events")
    return notes


#: Pieces without a window named one by one in :func:`window_notes` before the rest are
#: counted.
_LISTED_PIECES = 3
