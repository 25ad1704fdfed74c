"""u* beyond what the surface layer allows at night: another unit read as m s-1 (round mistakes52).

A sonic or logger program writing u* in km h-1 (m s-1 x 3.6) gives a record that passes
every range check: the wind-speed rule (:mod:`fluxpart.preflight`, a year's median above
1.5 m s-1) names a wind speed or cm s-1, and 3.6 times a grassland's nights' median of
0.2 m s-1 is 0.72. The u* threshold scales with the column, so a whole year so written
moves no budget, but every u* threshold and u* table written is 3.6 times too large; a
record so written from a program change on (July, on the invented grassland example)
filters the later months' calm nights at the earlier months' threshold, which moved NEE
+7.2 sigma. The surface layer bounds u* by the wind: in the logarithmic profile
u* = κU / ln((z - d) / z0) (κ = 0.41), at most about 0.14 U over grass and crops
((z - d) / z0 ≥ 20) and about 0.25 U over the roughest forest ((z - d) / z0 ≈ 5), and
stable nights lower it further (Stull 1988, ch. 9; Garratt 1992, ch. 3 (m)). Nights' wind
near the ground rarely has a month's median above 3-4 m s-1 even at exposed sites (m), and
towers' nights' median u* lies at 0.1-0.5 m s-1 (m). A month's nights whose median and
95th percentile both lie beyond :data:`NIGHT_BOUNDS` (short canopy 0.5 and 1.0 m s-1: a
median wind of 3.6 m s-1 at every night's middle and 7 m s-1 at one night hour in twenty
at 3 m over grass; tall canopy 1.0 and 2.0 m s-1) is not a real site's; two or more such
months are named, with the values divided by 3.6 where they then lie in the towers'
range. One stormy month never counts alone.

Limit (leftovers56): ``[site] canopy`` defaults to "tall" (:class:`fluxpart.site.Site`),
and a calm short canopy's u* in km h-1 (the invented grassland: nights' median 0.72, 95th
percentile 1.52 m s-1) lies within a tall canopy's bounds, so a grass or crop site that
leaves ``canopy`` unset is not named. The records cannot tell the canopy instead: the
bound is on u* / U and the roughness (z - d) / z0, and the input holds neither the wind
speed nor the canopy or measurement height; u* against Rg, temperature or the season
carries no canopy signal we can argue (a daytime u* rises with Rg over either canopy
(m)), and judging an unset canopy as short would name 8 of the 34 generated
forests of ``bench_ustar_scale.py``, a false alarm at every such forest. So a short canopy
must be written ``canopy = "short"``, as its u* floor needs anyway (:mod:`fluxpart.ustar`).

References
----------
Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9 (the
logarithmic wind profile and u* near the ground) (m)

Garratt, J. R. (1992). The Atmospheric Boundary Layer. Cambridge University Press, ch. 3
(roughness lengths of grass, crops and forests) (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["KMH_FACTOR", "NIGHT_BOUNDS", "STAGE", "months_beyond_surface_layer",
           "ustar_beyond_surface_layer"]

#: The finding's stage, as the warning names it.
STAGE = "input (ustar unit)"

#: Nights' median and 95th percentile of u* [m s-1] a calendar month of a real site stays
#: below, by canopy class of ``[site] canopy`` (see the module docstring; our bound,
#: physically argued: short canopy u* ≤ 0.14 U, tall ≤ 0.25 U, Stull 1988 (m)).
NIGHT_BOUNDS = {"short": (0.5, 1.0), "tall": (1.0, 2.0)}
#: km h-1 per m s-1 [1]: 3600 s h-1 / 1000 m km-1 (SI).
KMH_FACTOR = 3.6
#: The nights' median u* of towers [m s-1] (m): values divided by :data:`KMH_FACTOR`
#: within it name km h-1 as the likely unit.
TOWER_NIGHT_MEDIAN = (0.05, 0.5)
#: Fewest night records with u* a month needs to be judged [1]: about a third of a
#: month's nights in 30-minute records, a sixth in 60-minute ones (our choice).
_MIN_NIGHT_RECORDS = 150
#: Fewest months beyond the bounds that are named [1]: a storm season's single month
#: never alone (our choice).
_MIN_MONTHS = 2


def months_beyond_surface_layer(ustar, is_night, index: pd.DatetimeIndex,
                                canopy: str = "tall") -> pd.DataFrame:
    """Calendar months whose nights' u* lies beyond the surface layer's bounds.

    Parameters
    ----------
    ustar : array_like
        u* of each record as read [m s-1], NaN where missing; 0 (a logger's code for
        missing) is left out.
    is_night : array_like of bool
        The night mask of the records.
    index : pandas.DatetimeIndex
        Interval starts of the records.
    canopy : {"tall", "short"}
        The site's canopy class (``[site] canopy``), which selects :data:`NIGHT_BOUNDS`.

    Returns
    -------
    pandas.DataFrame
        One row per judged month beyond both bounds (index: the month's first day),
        columns ``median`` and ``p95`` [m s-1]; empty where none.

    References
    ----------
    Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology, ch. 9 (m).
    """
    ustar = np.asarray(ustar, dtype=float)
    with np.errstate(invalid="ignore"):
        kept = np.asarray(is_night, dtype=bool) & np.isfinite(ustar) & (ustar > 0)
    night = pd.Series(ustar[kept], index=pd.DatetimeIndex(index)[kept].to_period("M"))
    groups = night.groupby(level=0)
    months = pd.DataFrame({"median": groups.median(), "p95": groups.quantile(0.95),
                           "count": groups.size()})
    median_bound, p95_bound = NIGHT_BOUNDS.get(canopy, NIGHT_BOUNDS["tall"])
    beyond = ((months["count"] >= _MIN_NIGHT_RECORDS) & (months["median"] > median_bound)
              & (months["p95"] > p95_bound))
    return months.loc[beyond, ["median", "p95"]]


def ustar_beyond_surface_layer(ustar, is_night, index: pd.DatetimeIndex,
                               canopy: str = "tall", column: str = "ustar") -> str | None:
    """A warning where two months or more of nights' u* lie beyond the surface layer.

    Parameters
    ----------
    ustar, is_night, index, canopy
        As :func:`months_beyond_surface_layer`.
    column : str
        The file's column of u*, to name it.

    Returns
    -------
    str or None
        The warning naming the column, the months, their nights' median and 95th
        percentile, and km h-1 where their values divided by 3.6 lie in the towers'
        range of nights' medians (:data:`TOWER_NIGHT_MEDIAN`); None where fewer than
        :data:`_MIN_MONTHS` months are beyond the bounds.

    References
    ----------
    Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology, ch. 9 (m).
    Garratt, J. R. (1992). The Atmospheric Boundary Layer, ch. 3 (m).
    """
    months = months_beyond_surface_layer(ustar, is_night, index, canopy)
    if len(months) < _MIN_MONTHS:
        return None
    canopy = canopy if canopy in NIGHT_BOUNDS else "tall"
    median_bound, p95_bound = NIGHT_BOUNDS[canopy]
    median, p95 = float(months["median"].median()), float(months["p95"].median())
    low, high = TOWER_NIGHT_MEDIAN
    as_kmh = (f"; divided by {KMH_FACTOR:g} they read {median / KMH_FACTOR:.2f} and "
              f"{p95 / KMH_FACTOR:.2f} m s-1, as u* written in km h-1 reads"
              if low <= median / KMH_FACTOR <= high else "")
    # up to three months by name: two months a year apart written "first .. last" read
    # as the whole year between them (falsealarm58: 2023-01 and 2023-12 of a windy coast)
    span = (", ".join(str(month) for month in months.index) if len(months) <= 3
            else f"{months.index[0]} .. {months.index[-1]}")
    return (f"ustar (column {column!r}): in {len(months)} months ({span}) its nights' "
            f"median is {median:.2f} m s-1 and 95th percentile {p95:.2f} (the months' "
            f"middle values), beyond what the surface layer allows over a {canopy} canopy "
            f"(a median of {median_bound:g} and a 95th percentile of {p95_bound:g} m s-1: "
            f"u* = κU/ln((z-d)/z0) is at most about "
            f"{'a seventh' if canopy == 'short' else 'a quarter'} of the wind speed, and "
            f"towers' nights' median u* lies at 0.1-0.5 m s-1){as_kmh}: every u* threshold "
            "and u* table would be too large by that factor, and where only part of the "
            "record is so, its calm nights kept or lost at another part's threshold; "
            "convert the column to m s-1 (km h-1 / 3.6) or check that it is u*, not a "
            "wind speed")
