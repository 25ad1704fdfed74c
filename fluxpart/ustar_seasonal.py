"""Seasons whose u* threshold clearly differs from the one of the whole year.

The detector gives one u* threshold per calendar year (the median of the year's
temperature classes by default, see :mod:`fluxpart.ustar`). Where the canopy's
coupling to the air above changes through the year (leaf-out of a deciduous
forest, a growing crop), a season can need a clearly higher threshold: its
nights between the year's threshold and its own lost flux, yet would be kept as
measured and serve as donors of the night gaps, and annual NEE comes out too
negative. The bootstrap of the year's threshold does not see this.

This module finds such years from the u* table and gives the per-record
thresholds of every run (:func:`threshold_runs`). In such a year each season
takes the larger of its own detected threshold and the year's (a season is
never filtered below the year's threshold: a threshold read too high costs
data, one read too low biases the budget, the asymmetry behind the annual
maximum of Papale et al. 2006); the u* scenarios take each season's own
bootstrap percentile in the same way. With ``ustar_distinct_seasons =
"own_threshold"`` (default since 0.11.0) these are the central run and its
scenarios, and a run with the year's threshold on every night (``ustar_year``)
is the alternative; with ``"uncertainty_only"`` (0.8.1–0.10.0) the central run
keeps the year's threshold and the seasonal run (``ustar_seasonal``) is the
alternative. Either way the alternative's difference from the central sums is
added to the u* part of the uncertainty
(:func:`fluxpart.uncertainty.ustar_sigma`), and the run warns.

A year counts when two of its seasons' bootstrap 5–95 % ranges do not overlap
(the higher season's 5th percentile above the lower one's 95th) and the higher
season's threshold exceeds the year's by more than :data:`SEASONAL_MARGIN`. On
168 generated site-years with one planted threshold no year qualified (the
largest ratio of one season's 5th percentile to another's 95th was 1.01).

A year also counts when the two ranges lie apart by more than the same factor
(the higher season's 5th percentile above :data:`SEASONAL_MARGIN` times the lower
one's 95th) and the higher season's threshold is above the year's at all (after
0.19.0). The year's threshold is the median of its classes, so where the tower's
coupling changed within the year (a sonic raised on a growing canopy, a new
mast) it lies between the two regimes, near the one with more nights: the
later seasons then need a higher threshold that is less than 20 % above the
year's, and were kept at the year's, their nights between the two thresholds
kept as measured with their lost flux. Two seasons resolved 20 % apart by
their own bootstraps are the same evidence of a change that the margin against
the year's asks for, and raising a season to its own threshold only ever costs
data (the asymmetry of Papale et al. 2006). On one planted threshold the ratio
stays near 1 (1.01 at most, above), so such runs do not change; a loss that
grows gradually with u* (no sharp threshold) can qualify (1.30 in one year of
the ninth trial), and its seasons are then filtered higher.

References
----------
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
Exchange measured with eddy covariance technique: algorithms and uncertainty
estimation. Biogeosciences 3:571–583 (thresholds per season; the year's
threshold as the largest seasonal one) (m).

Barr, A. G. et al. (2013). Use of change-point detection for friction-velocity
threshold evaluation in eddy-covariance studies. Agricultural and Forest
Meteorology 171–172:31–45 (thresholds that vary with season and canopy) (m).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import ConfigError
from .ustar import SEASONS, assign_seasons

__all__ = ["DISTINCT_SEASON_RULES", "SEASONAL_MARGIN", "contrast_warnings", "seasonal_contrast",
           "seasonal_thresholds", "threshold_runs"]

#: A season's threshold counts as clearly above the year's when it exceeds it by more
#: than this factor [1]: 1.2, the ±20 % within which the detector is expected to
#: recover a threshold (the calibration target of the u* detector); our choice.
SEASONAL_MARGIN = 1.2

#: Values of ``ustar_distinct_seasons``: which run is central in a year whose seasons differ.
DISTINCT_SEASON_RULES = ("own_threshold", "uncertainty_only")


def seasonal_contrast(table: pd.DataFrame, margin: float = SEASONAL_MARGIN) -> pd.DataFrame:
    """Years whose seasons' u* thresholds clearly differ, with the highest season.

    Parameters
    ----------
    table : pandas.DataFrame
        The u* table (:meth:`fluxpart.ustar.UstarResult.table` with ``source``):
        ``year``, ``period`` (``"year"`` or a season), ``threshold`` [m s-1] and
        ``threshold_p05``, ``threshold_p95`` (bootstrap percentiles) [m s-1].
    margin : float, optional
        Factor by which the highest season's threshold must exceed the year's, or
        else its 5th percentile the lowest season's 95th (then it need only exceed
        the year's).

    Returns
    -------
    pandas.DataFrame
        One row per such year: ``year``, ``season`` (the highest),
        ``season_threshold``, ``season_p05``, ``lowest_season``, ``lowest_p95``
        and ``year_threshold`` [m s-1]; empty where no year qualifies (also
        without bootstrap percentiles).
    """
    columns = ["year", "season", "season_threshold", "season_p05", "lowest_season",
               "lowest_p95", "year_threshold"]
    needed = {"year", "period", "threshold", "threshold_p05", "threshold_p95"}
    if not needed <= set(table.columns):
        return pd.DataFrame(columns=columns)
    rows = []
    for year, group in table.groupby("year", sort=True):
        whole = group.loc[group["period"] == "year", "threshold"].astype(float)
        seasons = group[group["period"].isin(SEASONS)].dropna(
            subset=["threshold", "threshold_p05", "threshold_p95"])
        if whole.empty or not np.isfinite(whole.iloc[0]) or len(seasons) < 2:
            continue
        high = seasons.loc[seasons["threshold_p05"].astype(float).idxmax()]
        low = seasons.loc[seasons["threshold_p95"].astype(float).idxmin()]
        high_p05, low_p95 = float(high["threshold_p05"]), float(low["threshold_p95"])
        above = float(high["threshold"]) / float(whole.iloc[0])
        # resolved and well above the year's, or resolved well apart and above the year's
        if (high_p05 > low_p95 and above > margin) or (high_p05 > margin * low_p95
                                                        and above > 1.0):
            rows.append((int(year), high["period"], float(high["threshold"]),
                         float(high["threshold_p05"]), low["period"],
                         float(low["threshold_p95"]), float(whole.iloc[0])))
    return pd.DataFrame(rows, columns=columns)


def seasonal_thresholds(index, latitude, table: pd.DataFrame, central: np.ndarray,
                        years, column: str = "threshold") -> np.ndarray:
    """Per-record thresholds with each season of `years` at its own [m s-1].

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval start times (local standard time).
    latitude : float
        Site latitude [degrees] (the hemisphere names the seasons).
    table : pandas.DataFrame
        The u* table (``year``, ``period`` and `column`).
    central : numpy.ndarray
        The year's threshold per record [m s-1] (of the same run: the detected
        value or a bootstrap percentile).
    years : iterable of int
        The years whose seasons take their own thresholds
        (``seasonal_contrast(table)["year"]``).
    column : str, optional
        The table's column of the seasons' thresholds: ``"threshold"`` (detected,
        default) or ``"threshold_pXX"`` (a bootstrap percentile).

    Returns
    -------
    numpy.ndarray
        Each record of those years at the larger of its season's own threshold
        and `central` where the season has one; every other record at `central`.
    """
    seasons = assign_seasons(index, latitude)
    own = table[table["period"].isin(SEASONS) & table["year"].isin(list(years))]
    lookup = pd.Series(own[column].astype(float).to_numpy(),
                       index=pd.MultiIndex.from_arrays([own["year"].astype(np.int64),
                                                        own["period"].astype(str)]))
    keys = pd.MultiIndex.from_arrays([seasons["year"].to_numpy(),
                                      seasons["season"].astype(str).to_numpy()])
    values = lookup.reindex(keys).to_numpy(dtype=float)
    central = np.asarray(central, dtype=float)
    # never below the year's: a threshold read too high costs data, one too low biases
    return np.where(np.isfinite(values), np.fmax(values, central), central)


def threshold_runs(index, latitude, table: pd.DataFrame, year_runs: dict,
                   contrast: pd.DataFrame, rule: str = "own_threshold") -> dict:
    """Per-record u* thresholds of every run, seasons included where they differ.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval start times (local standard time).
    latitude : float
        Site latitude [degrees].
    table : pandas.DataFrame
        The u* table (``year``, ``period``, ``threshold``, ``threshold_pXX``).
    year_runs : dict of str to numpy.ndarray
        The year's threshold per record [m s-1] of the run ``central`` and of
        each scenario ``ustar_pXX``.
    contrast : pandas.DataFrame
        :func:`seasonal_contrast` of `table`.
    rule : str, optional
        One of :data:`DISTINCT_SEASON_RULES` (see the module docstring).

    Returns
    -------
    dict of str to numpy.ndarray
        `year_runs` unchanged where no year qualifies. Otherwise, with
        ``"own_threshold"``: ``central`` and the scenarios with the seasons of
        the qualifying years at their own thresholds (:func:`seasonal_thresholds`,
        the scenarios at the seasons' own percentiles) and ``ustar_year`` (the
        year's threshold on every night); with ``"uncertainty_only"``:
        `year_runs` and ``ustar_seasonal`` (the seasonal central thresholds).
    """
    if rule not in DISTINCT_SEASON_RULES:
        raise ConfigError(f"ustar_distinct_seasons = {rule!r}: expected one of "
                         f"{', '.join(DISTINCT_SEASON_RULES)}")
    if contrast.empty:
        return dict(year_runs)
    years = contrast["year"]

    def seasonal(name):
        column = "threshold" if name == "central" else f"threshold_{name.split('_')[-1]}"
        if column not in table.columns:
            return year_runs[name]
        return seasonal_thresholds(index, latitude, table, year_runs[name], years, column)

    if rule == "uncertainty_only":
        return {**year_runs, "ustar_seasonal": seasonal("central")}
    return {**{name: seasonal(name) for name in year_runs}, "ustar_year": year_runs["central"]}


def contrast_warnings(contrast: pd.DataFrame, rule: str = "own_threshold") -> list[str]:
    """One warning per row of :func:`seasonal_contrast`, naming the seasons and thresholds."""
    if rule == "own_threshold":
        what = ("Each season of that year is filtered at its own threshold where it is higher "
                "than the year's; the run with the year's threshold on every night (annual "
                "columns *_ustar_year) is added to the u* part of the uncertainty")
    else:
        what = ("Nights between the two thresholds lost flux but are kept "
                "(ustar_distinct_seasons = \"uncertainty_only\"): annual NEE may be too "
                "negative. The run with each season's own threshold (annual columns "
                "*_ustar_seasonal) is added to the u* part of the uncertainty")
    return [f"u* threshold in {row.year} changes with the season: {row.season} "
            f"{row.season_threshold:.3f} m s-1 (bootstrap 5th percentile "
            f"{row.season_p05:.3f}) against the year's {row.year_threshold:.3f}, while "
            f"{row.lowest_season} lies at most {row.lowest_p95:.3f}. {what}"
            for row in contrast.itertuples()]
