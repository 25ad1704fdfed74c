"""How much of a year's night data shows the temperature response its E0 rests on.

A year's E0 (:func:`fluxpart.partition.nighttime.annual_e0`) can be found, with a
standard error that looks modest, although hardly any of the year's nights span a
temperature range wide enough to show the Lloyd–Taylor curve: a tropical forest whose
nights stay within 23–27 °C, a maritime site, a year of which most nights were lost.
The joint fit (:func:`fluxpart.partition.nighttime.fit_e0_joint`) then reads E0 from
spreads of 2–4 K within windows, where a few records bend the curve (a known-truth
trial's forest: E0 130–204 K against a planted 150 K on 3–4 of 72 accepted windows).
This module names such years; it changes no value.

The measure is the number of *disjoint* accepted E0 windows of the year: windows of
:func:`fluxpart.partition.nighttime.fit_e0_windows` that passed every rule (enough
records, a temperature range of at least ``e0_min_temperature_range``, an acceptable
fit), counted so that no two share a record (the windows overlap: 15 days every 5 days,
so four accepted windows in a row are one spell of 30 days). A year is named when it
holds fewer disjoint accepted windows than ``e0_best_windows``.

Why that threshold: Reichstein et al. (2005) (m) accept a window only where its
temperatures span at least 5 K, as Lloyd & Taylor's (1994) fit cannot tell E0 from the
noise over a narrower range, and take a year's E0 from the best three windows; the
standard error of that mean assumes the three independent. A year with fewer than that
many independent windows of the required range holds less evidence of the temperature
response than the published method was built on, whichever estimator found its E0. It
uses the run's own settings, so no constant of its own.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["disjoint_accepted", "thin_e0_notes"]

#: Sources of an E0 fitted from the year's own night data (``fallback`` and
#: ``nearest_year`` are named by their own warnings).
_OWN_SOURCES = ("joint", "fitted")


def disjoint_accepted(windows: pd.DataFrame) -> int:
    """Most accepted windows of `windows` of which no two overlap.

    Parameters
    ----------
    windows : pandas.DataFrame
        Rows of :func:`fluxpart.partition.nighttime.fit_e0_windows` (columns
        ``window_start``, ``window_end`` (exclusive) and ``accepted``).

    Returns
    -------
    int
        The count, by the earliest-end greedy choice, which is the largest for
        intervals (Kleinberg & Tardos 2006, interval scheduling).

    References
    ----------
    Kleinberg, J. & Tardos, É. (2006). Algorithm Design, section 4.1 (interval
    scheduling: the greedy rule of the earliest finish is optimal). (m)
    """
    accepted = windows[windows["accepted"].to_numpy(dtype=bool)]
    ends = accepted["window_end"].to_numpy()
    order = np.argsort(ends, kind="stable")
    starts, ends = accepted["window_start"].to_numpy()[order], ends[order]
    count, free_from = 0, None
    for start, end in zip(starts, ends, strict=True):
        if free_from is None or start >= free_from:
            count, free_from = count + 1, end
    return count


def thin_e0_notes(e0_annual: pd.DataFrame, e0_windows: pd.DataFrame,
                  respiration_driver: str, *, e0_best_windows: int = 3,
                  e0_min_temperature_range: float = 5.0) -> list:
    """Warnings naming each year whose E0 rests on few windows of a wide enough range.

    Parameters
    ----------
    e0_annual : pandas.DataFrame
        Output of :func:`fluxpart.partition.nighttime.annual_e0` (indexed by year;
        columns ``e0`` [K], ``e0_se`` [K], ``windows_accepted``, ``windows_tried``,
        ``source``).
    e0_windows : pandas.DataFrame
        Output of :func:`fluxpart.partition.nighttime.fit_e0_windows` (columns
        ``year``, ``window_start``, ``window_end``, ``temperature_range`` [K],
        ``accepted``, ``reason``).
    respiration_driver : str
        Name of the driving temperature, for the text.
    e0_best_windows : int, optional
        Fewest disjoint accepted windows a year needs not to be named; the run's
        ``e0_best_windows`` (3, Reichstein et al. 2005 (m)).
    e0_min_temperature_range : float, optional
        The run's smallest accepted window range [K], for the text; 5 K.

    Returns
    -------
    list of str
        One text per named year, in year order; empty where none is.

    Notes
    -----
    Only years whose E0 is their own (``source`` ``joint`` or ``fitted``) are judged.
    A year's windows are those centred in it, else those overlapping it (the candidates
    of ``annual_e0``). The text gives the accepted and disjoint windows, the median
    temperature range of the year's windows with enough records to be judged, the E0 and
    its standard error.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8:315–323.

    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439, section
    "Nighttime-based approach" (the 5 K range per window, the three best windows) (m).
    """
    if "source" not in e0_annual.columns or e0_windows.empty:
        return []
    notes = []
    for year, row in e0_annual[e0_annual["source"].isin(_OWN_SOURCES)].iterrows():
        candidates = e0_windows[e0_windows["year"] == int(year)]
        if candidates.empty:        # no window centred in the year: those overlapping it
            start, end = pd.Timestamp(int(year), 1, 1), pd.Timestamp(int(year) + 1, 1, 1)
            candidates = e0_windows[(e0_windows["window_start"] < end)
                                    & (e0_windows["window_end"] > start)]
        disjoint = disjoint_accepted(candidates)
        if disjoint >= e0_best_windows:
            continue
        judged = candidates.loc[~candidates["reason"].astype(str)
                                .str.startswith("too few night records"), "temperature_range"]
        spread = (f"; the median range of its windows is "
                  f"{float(np.nanmedian(judged)):.1f} K" if judged.notna().any() else "")
        accepted = int(row["windows_accepted"])
        # "0 of them without overlap" after "0 ... were accepted" said nothing (review63)
        apart = f", {disjoint} of them without overlap" if accepted else ""
        # "0 accepted" beside an E0 with its error and "windows_used 25" in the report's
        # table read as a contradiction (review63): say what the joint E0 rests on
        used = row.get("windows_used")
        joint = (f"; its E0 is one fit to the night records of {int(used)} consecutive "
                 "windows together, each with its own Rref (source joint), not a mean of "
                 "windows accepted on their own"
                 if row["source"] == "joint" and used is not None and pd.notna(used) else "")
        notes.append(
            f"nighttime partitioning: the E0 of {year} ({float(row['e0']):.0f} ± "
            f"{float(row['e0_se']):.0f} K, on {respiration_driver}) rests on few nights: "
            f"{accepted} of its {int(row['windows_tried'])} E0 windows "
            f"were accepted (a night temperature range of at least "
            f"{e0_min_temperature_range:g} K and an acceptable fit){apart}, fewer than the "
            f"{e0_best_windows} independent windows the "
            f"window method averages (Reichstein et al. 2005){spread}{joint}. Over so narrow "
            "a range E0 is poorly determined and its standard error may understate that: "
            "treat the year's nighttime Reco and GPP with caution (the nighttime E0 window "
            "table holds every window)")
    return notes
