"""The two sides of a long NEE gap: the error of a fill across a change of the canopy.

A gap of weeks in the NEE record is filled from donors days to months away. Where the
ecosystem changes state inside the gap (leaf-out, senescence, a harvest, the end of a
drought), the donors of one side describe the canopy before the change and those of
the other side the canopy after it, and no similarity of weather tells which state held
on a given day of the gap. The artificial gaps of :func:`fluxpart.uncertainty.
artificial_gap_errors` score such fills only as often as a gap of that length placed at
random meets a change of state, so a real gap that spans the green-up is stated as
certain as one in midsummer.

This module fills each long gap twice more, once from the records before it only and
once from the records after it only, and states the error of the gap's sum as that of
a change of state at an unknown time within the gap (:func:`state_change_variance`).

References
----------
Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
assimilation and ecosystem respiration: review and improved algorithm. Global Change
Biology 11, 1424–1439 (marginal distribution sampling's ±7-day first window).

Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the additional
uncertainty in gap-filled NEE resulting from long gaps in the CO2 flux record. Agric.
For. Meteorol. 147, 199–208 (long gaps carry most of the gap-filling error).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .units import flux_to_carbon

#: Gaps longer than this [days] get the two one-sided fills. Marginal distribution
#: sampling first looks for donors within ±7 days (Reichstein et al. 2005): in a gap of
#: up to 14 days every record has measured records of one side that close, so its fill
#: describes the canopy of the days around it; beyond, the middle of the gap is filled
#: from a canopy at least a week away on both sides.
MIN_GAP_DAYS = 14.0


def gap_runs(missing) -> tuple[np.ndarray, np.ndarray]:
    """Start positions and lengths of the runs of True in a boolean array.

    Parameters
    ----------
    missing : array_like of bool
        True where a record is missing.

    Returns
    -------
    starts, lengths : numpy.ndarray of int
        Position of the first record of each run and its length [records].

    References
    ----------
    None: elementary run-length encoding (common practice).
    """
    missing = np.asarray(missing, dtype=bool)
    edges = np.diff(np.concatenate([[0], missing.astype(np.int8), [0]]))
    starts = np.flatnonzero(edges == 1)
    return starts, np.flatnonzero(edges == -1) - starts


def run_ids(mask) -> np.ndarray:
    """Number of the run of True each record belongs to (0, 1, ...); -1 outside runs.

    Parameters
    ----------
    mask : array_like of bool

    Returns
    -------
    numpy.ndarray of int

    References
    ----------
    None: elementary run-length encoding (common practice).
    """
    mask = np.asarray(mask, dtype=bool)
    starts = np.diff(np.concatenate([[0], mask.astype(np.int8)])) == 1
    return np.where(mask, np.cumsum(starts) - 1, -1)


def long_gaps(filled, records_per_day: int, min_days: float = MIN_GAP_DAYS, breaks=None):
    """Start positions and lengths of the runs of filled records longer than `min_days`.

    Parameters
    ----------
    filled : array_like of bool
        True where NEE is filled (not measured).
    records_per_day : int
        Records per day (48 for 30-minute, 24 for hourly records).
    min_days : float, optional
        Shortest gap taken [days], exclusive; default :data:`MIN_GAP_DAYS`.
    breaks : array_like of int, optional
        Record positions of declared events (:func:`fluxpart.gapfill.event_breaks`):
        a gap with an event inside or at either end is left out: the time of the
        change is known, and each side of the event is filled from its own side.

    Returns
    -------
    starts, lengths : numpy.ndarray of int
        First record of each long gap and its length [records].

    References
    ----------
    Reichstein et al. (2005); Richardson & Hollinger (2007): see the module docstring.
    """
    starts, lengths = gap_runs(filled)
    keep = lengths > float(min_days) * int(records_per_day)
    if breaks is not None and len(breaks):
        cuts = np.asarray(breaks, dtype=np.int64)
        # an event within the gap or at either of its ends
        inside = (cuts[None, :] >= starts[:, None]) & (cuts[None, :] <= (starts + lengths)[:, None])
        keep &= ~inside.any(axis=1)
    return starts[keep], lengths[keep]


def one_sided_fills(nee_measured, starts, lengths, fill):
    """Fill each gap from the records before it only and from those after it only.

    Parameters
    ----------
    nee_measured : array_like
        NEE after screening and the u* filter [µmol m-2 s-1], NaN where missing.
    starts, lengths : array_like of int
        The gaps (:func:`long_gaps`) [records].
    fill : callable
        ``fill(values, gaps) -> filled values``: the run's own NEE gap filling of
        `values` (NaN where missing) at the records True in `gaps` only.

    Returns
    -------
    before, after : numpy.ndarray
        Per record [µmol m-2 s-1]: inside each gap its fill from the measured records
        before the gap (those from the gap's end on hidden) and from those after it
        (those up to the gap's start hidden); NaN outside the gaps and where a fill
        found no donor.

    References
    ----------
    Reichstein et al. (2005); Richardson & Hollinger (2007): see the module docstring.
    """
    nee = np.asarray(nee_measured, dtype=float)
    before = np.full(nee.size, np.nan)
    after = np.full(nee.size, np.nan)
    for start, length in zip(np.asarray(starts, int), np.asarray(lengths, int), strict=True):
        end = start + length
        gap = np.zeros(nee.size, dtype=bool)
        gap[start:end] = True
        early = nee.copy()
        early[end:] = np.nan
        before[start:end] = np.asarray(fill(early, gap), dtype=float)[start:end]
        late = nee.copy()
        late[:start] = np.nan
        after[start:end] = np.asarray(fill(late, gap), dtype=float)[start:end]
    return before, after


def state_change_variance(fill, before, after, codes, periods: int, records=None,
                          groups=None):
    """Variance of gap sums from a change of state at an unknown time in each gap.

    Parameters
    ----------
    fill : array_like
        The central fill of each record [µmol m-2 s-1].
    before, after : array_like
        One-sided fills (:func:`one_sided_fills`) [µmol m-2 s-1]; NaN outside the
        long gaps.
    codes : array_like of int
        Period number of each record (0 .. `periods` − 1).
    periods : int
        Number of periods.
    records : array_like of bool, optional
        Records counted (e.g. the daylight ones only); default all.
    groups : array_like of int, optional
        Number of the gap (or stretch) each record belongs to, non-negative; default
        the runs of records whose `before` or `after` is finite.

    Returns
    -------
    numpy.ndarray
        Per period [(µmol m-2 s-1)² summed over records, i.e. the square of a sum of
        µmol m-2 s-1]: Σ over the gaps' parts in the period of the part's mean square
        error ``(E[S] − F)² + Var[S]``, ``B``, ``A`` and ``F`` the sums of the part's
        before-side, after-side and central fills and ``D = A − B``; for a gap wholly
        in the period ``E[S] = m = (A + B) / 2`` and ``Var[S] = D² / 12``.

    Notes
    -----
    If the ecosystem changes from the state the before-side donors describe to the
    one the after-side donors describe at a time u within the gap, the true sum of a
    gap's part is close to ``A + x (B − A)``, x the share of the part before the
    change. With u uniform over the gap (nothing in the records tells when the change
    came) and a whole gap, x is uniform on [0, 1]: the sum has mean m and variance
    D²/12 (the variance of a uniform distribution), and the central fill F errs by
    ``(m − F)² + D²/12`` in mean square. A part of a gap (a day, a month or a budget
    year of a gap that runs on) spanning the shares p0 to p1 of the gap lies wholly
    before the change with probability 1 − p1, wholly after it with probability p0,
    and is cut by it otherwise (x uniform): ``E[x] = 1 − p1 + (p1 − p0)/2``,
    ``E[x²] = 1 − p1 + (p1 − p0)/3``, ``E[S] = A − E[x] D``,
    ``Var[S] = D² (E[x²] − E[x]²)``; a day in the middle of a long gap is one state
    or the other, each half the time (D²/4), a day at its start is most likely the
    state before. Where both sides describe the same state, A ≈ B ≈ F and the term
    vanishes; a fill that took its donors from one side only (as similarity of
    temperature does in spring, when the warm days of the gap resemble the days
    after leaf-out) carries D²/3 over the whole gap. A change that is not monotonic
    within the gap (a harvest and regrowth) is not described. A record whose
    one-sided fill found no donor counts its central fill on that side (no evidence
    of a change). Both sides are filled with the run's own method and settings, so
    the weather of the gap is accounted for by the donors' similarity as in the
    central fill.

    References
    ----------
    Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the
    additional uncertainty in gap-filled NEE resulting from long gaps in the CO2
    flux record. Agric. For. Meteorol. 147, 199–208. (Long gaps carry most of the
    gap-filling error; their error grows with the gap's length and the season.)

    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration: review and improved algorithm. Global
    Change Biology 11, 1424–1439. (Marginal distribution sampling's windows.)
    """
    fill = np.asarray(fill, dtype=float)
    before = np.asarray(before, dtype=float)
    after = np.asarray(after, dtype=float)
    codes = np.asarray(codes, dtype=np.int64)
    periods = int(periods)
    span = np.isfinite(before) | np.isfinite(after)
    in_gap = span & np.isfinite(fill)
    if records is not None:
        in_gap &= np.asarray(records, dtype=bool)
    if not in_gap.any():
        return np.zeros(periods)
    # gap number of each record (runs of the long gaps' records), then one group per gap
    # and period
    gap = run_ids(span) if groups is None else np.asarray(groups, dtype=np.int64)
    # where each part lies in its gap: the shares p0 .. p1 of the gap's records (all of
    # them, whether counted or not), from the first and last record of the part
    span_gap = gap[span]
    _, gap_of, gap_size = np.unique(span_gap, return_inverse=True, return_counts=True)
    position = pd.Series(span_gap).groupby(span_gap).cumcount().to_numpy()
    span_part = span_gap * periods + codes[span]
    parts, part_of = np.unique(span_part, return_inverse=True)
    first = np.full(parts.size, np.iinfo(np.int64).max)
    last = np.full(parts.size, -1)
    np.minimum.at(first, part_of, position)
    np.maximum.at(last, part_of, position)
    size = np.zeros(parts.size, dtype=np.int64)
    size[part_of] = gap_size[gap_of]
    group = gap[in_gap] * periods + codes[in_gap]
    central = fill[in_gap]
    early = np.where(np.isfinite(before[in_gap]), before[in_gap], central)
    late = np.where(np.isfinite(after[in_gap]), after[in_gap], central)
    labels, where = np.unique(group, return_inverse=True)
    sums = [np.bincount(where, weights=values, minlength=labels.size)
            for values in (central, early, late)]
    f, b, a = sums
    found = np.searchsorted(parts, labels)
    p0 = first[found] / size[found]
    p1 = (last[found] + 1) / size[found]
    whole = (first[found] == 0) & (last[found] + 1 == size[found])
    middle = (a + b) / 2.0
    variance = np.square(middle - f) + np.square(a - b) / 12.0
    # a part of a gap: the change before it, after it or within it (Notes)
    share = 1.0 - p1 + (p1 - p0) / 2.0
    spread = np.maximum(1.0 - p1 + (p1 - p0) / 3.0 - np.square(share), 0.0)
    partial = np.square(a - share * (a - b) - f) + np.square(a - b) * spread
    variance = np.where(whole, variance, partial)
    return np.bincount(labels % periods, weights=variance, minlength=periods)


def state_change_notes(index, fill, before, after, interval_minutes: int,
                       gapfill_sigma, year_keys=None) -> list:
    """Warnings naming each long gap whose change of state is most of its year's
    gap-filling uncertainty.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record times (stamps at interval start).
    fill, before, after : array_like
        Central and one-sided fills (:func:`one_sided_fills`) [µmol m-2 s-1].
    interval_minutes : int
        Record length [min].
    gapfill_sigma : pandas.Series
        The gap-filling part of each year's NEE uncertainty, 1 sigma [g C m-2], by
        budget year (the annual ``nee_uncertainty_gapfill``).
    year_keys : array_like of int, optional
        Budget year of each record (:func:`fluxpart.budget_calendar.budget_year_numbers`,
        the labels of `gapfill_sigma`); default the calendar year of `index`.

    Returns
    -------
    list of str
        One warning per gap whose state-change 1 sigma in a budget year
        (:func:`state_change_variance` over the gap's part in that year, as the
        year's interval counts it) is at least half that year's gap-filling part (a
        quarter of its variance or more): its dates, the sums of its fills from each
        side alone and as filled [g C m-2], and that 1 sigma; a gap across two budget
        years names the year of the larger share.

    References
    ----------
    Reichstein et al. (2005); Richardson & Hollinger (2007): see the module docstring.
    """
    fill = np.asarray(fill, dtype=float)
    before = np.asarray(before, dtype=float)
    after = np.asarray(after, dtype=float)
    years = (np.asarray(pd.DatetimeIndex(index).year, dtype=np.int64) if year_keys is None
             else np.asarray(year_keys, dtype=np.int64))
    grams = float(flux_to_carbon(1.0, interval_minutes))   # g C m-2 per (µmol m-2 s-1)
    notes = []
    for start, length in zip(*gap_runs(np.isfinite(before) | np.isfinite(after)), strict=True):
        end = start + length
        part = slice(start, end)
        central = fill[part]
        if not np.isfinite(central).any():
            continue
        # the gap's part in each budget year, as that year's interval counts it
        labels, codes = np.unique(years[part], return_inverse=True)
        sigmas = np.sqrt(state_change_variance(central, before[part], after[part], codes,
                                               labels.size)) * grams
        references = np.array([float(gapfill_sigma.get(int(year), np.nan))
                               for year in labels])
        with np.errstate(divide="ignore", invalid="ignore"):
            shares = np.where(np.isfinite(references) & (sigmas > 0.0),
                              sigmas / references, np.nan)
        if not (shares >= 0.5).any():
            continue
        worst = int(np.nanargmax(shares))
        sigma, reference = float(sigmas[worst]), float(references[worst])
        sums = [float(np.nansum(np.where(np.isfinite(side), side, central))) * grams
                for side in (before[part], after[part])]
        days = (end - start) * float(interval_minutes) / 1440.0
        counted = (f"the interval counts {sigma:.1f} g C m-2 (1 sigma) for the unknown time "
                   f"of the change, {sigma / reference * 100:.0f} % of the year's "
                   "gap-filling part" if labels.size == 1 else
                   f"the interval of budget year {int(labels[worst])} counts {sigma:.1f} g C "
                   f"m-2 (1 sigma) for the unknown time of the change, "
                   f"{sigma / reference * 100:.0f} % of that year's gap-filling part")
        notes.append(
            f"the NEE gap {index[start]:%Y-%m-%d %H:%M} to {index[end - 1]:%Y-%m-%d %H:%M} "
            f"({days:.0f} days) spans a change of state: filled from the records before it "
            f"alone it sums to {sums[0]:+.1f} g C m-2, from those after it alone to "
            f"{sums[1]:+.1f}, as filled to {float(np.nansum(central)) * grams:+.1f}; "
            f"{counted}. Where "
            "the site's log dates the change (leaf-out, a harvest or cut, rain after a "
            "drought), declare it as an event so that neither side fills the other")
    return notes
