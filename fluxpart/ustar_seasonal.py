"""Seasons whose u* threshold clearly differs from the one applied to the whole year.

The pipeline applies one u* threshold per calendar year (the median of the
year's temperature classes by default, see :mod:`fluxpart.ustar`). Where the
canopy's coupling to the air above changes through the year (leaf-out of a
deciduous forest, a growing crop), a season can need a clearly higher threshold:
its nights between the year's threshold and its own lost flux, yet are kept as
measured and serve as donors of the night gaps, and annual NEE comes out too
negative. The bootstrap of the year's threshold does not see this, so the stated
interval would not either.

This module finds such seasons from the u* table and gives the per-record
thresholds of the *seasonal scenario*: each season of such a year at its own
detected threshold (other years and seasons without a threshold at the year's).
The pipeline runs gap filling and both partitionings once more with them; the
difference of the sums from the central run is added to the u* part of the
uncertainty (:func:`fluxpart.uncertainty.ustar_sigma`) and the run warns. No
central number changes.

A year counts when two of its seasons' bootstrap 5–95 % ranges do not overlap
(the higher season's 5th percentile above the lower one's 95th) and the higher
season's threshold exceeds the year's by more than :data:`SEASONAL_MARGIN`.

References
----------
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
Exchange measured with eddy covariance technique: algorithms and uncertainty
estimation. Biogeosciences 3:571–583 (thresholds per season; the year's
threshold as the largest seasonal one) (m).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .ustar import SEASONS, assign_seasons

__all__ = ["SEASONAL_MARGIN", "contrast_warnings", "seasonal_contrast", "seasonal_thresholds"]

#: A season's threshold counts as clearly above the year's when it exceeds it by more
#: than this factor [1]: 1.2, the ±20 % within which the detector is expected to
#: recover a threshold (the calibration target of the u* detector); our choice.
SEASONAL_MARGIN = 1.2


def seasonal_contrast(table: pd.DataFrame, margin: float = SEASONAL_MARGIN) -> pd.DataFrame:
    """Years whose seasons' u* thresholds clearly differ, with the highest season.

    Parameters
    ----------
    table : pandas.DataFrame
        The u* table (:meth:`fluxpart.ustar.UstarResult.table` with ``source``):
        ``year``, ``period`` (``"year"`` or a season), ``threshold`` [m s-1] and
        ``threshold_p05``, ``threshold_p95`` (bootstrap percentiles) [m s-1].
    margin : float, optional
        Factor by which the highest season's threshold must exceed the year's.

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
        separated = float(high["threshold_p05"]) > float(low["threshold_p95"])
        if separated and float(high["threshold"]) > margin * float(whole.iloc[0]):
            rows.append((int(year), high["period"], float(high["threshold"]),
                         float(high["threshold_p05"]), low["period"],
                         float(low["threshold_p95"]), float(whole.iloc[0])))
    return pd.DataFrame(rows, columns=columns)


def seasonal_thresholds(index, latitude, table: pd.DataFrame, central: np.ndarray,
                        years) -> np.ndarray:
    """Per-record thresholds of the seasonal scenario [m s-1].

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval start times (local standard time).
    latitude : float
        Site latitude [degrees] (the hemisphere names the seasons).
    table : pandas.DataFrame
        The u* table (``year``, ``period``, ``threshold``).
    central : numpy.ndarray
        The central run's threshold per record [m s-1].
    years : iterable of int
        The years whose seasons take their own thresholds
        (``seasonal_contrast(table)["year"]``).

    Returns
    -------
    numpy.ndarray
        Each record of those years at its season's own detected threshold where
        the season has one; every other record at `central`.
    """
    seasons = assign_seasons(index, latitude)
    own = table[table["period"].isin(SEASONS) & table["year"].isin(list(years))]
    lookup = pd.Series(own["threshold"].astype(float).to_numpy(),
                       index=pd.MultiIndex.from_arrays([own["year"].astype(np.int64),
                                                        own["period"].astype(str)]))
    keys = pd.MultiIndex.from_arrays([seasons["year"].to_numpy(),
                                      seasons["season"].astype(str).to_numpy()])
    values = lookup.reindex(keys).to_numpy(dtype=float)
    return np.where(np.isfinite(values), values, np.asarray(central, dtype=float))


def contrast_warnings(contrast: pd.DataFrame) -> list[str]:
    """One warning per row of :func:`seasonal_contrast`, naming the seasons and thresholds."""
    return [f"u* threshold in {row.year} changes with the season: {row.season} "
            f"{row.season_threshold:.3f} m s-1 (bootstrap 5th percentile "
            f"{row.season_p05:.3f}) against the year's {row.year_threshold:.3f} applied to "
            f"every night, while {row.lowest_season} lies at most {row.lowest_p95:.3f}. "
            f"{row.season.capitalize()} nights between the two thresholds lost flux but are "
            "kept: annual NEE may be too negative. The run with each season's own threshold "
            "(annual columns *_ustar_seasonal) is added to the u* part of the uncertainty; "
            "ustar_annual = \"maximum\" applies the largest seasonal threshold to the year"
            for row in contrast.itertuples()]
