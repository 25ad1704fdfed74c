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
           "ustar_beyond_surface_layer", "ustar_step_up", "ustar_stepped_to_kmh"]

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


#: Days either side of a candidate day whose nights' median u* are compared: a fortnight
#: (the step is sudden) and six weeks (the step stays; a windy spell does not) (our choice).
STEP_SPANS_DAYS = (14, 45)
#: Quantiles of the nights' u* that must all step so (the calm nights' 10th percentile and
#: the median): a unit multiplies every value, the calm nights' and the others' alike,
#: while a change of weather regime (a dry season's anticyclone giving way to fronts)
#: changes how often the nights are windy, and its calm, clear nights between the fronts
#: stay as calm (our argument; Stull 1988, ch. 9 (m)).
STEP_QUANTILES = (0.1, 0.5)
#: Largest ratio between a measured step and :data:`KMH_FACTOR` for the step to read as
#: km h-1 (2.57 to 5.04): :data:`fluxpart.split_factor.UNIT_FIT`'s tolerance (our choice).
STEP_FIT = 1.4
#: Fewest night records with u* in each span either side [1]: about four nights of
#: 30-minute records, eight of 60-minute ones (our choice).
_MIN_STEP_RECORDS = 60


def ustar_step_up(ustar, is_night, index: pd.DatetimeIndex) -> dict | None:
    """The day from which the nights' u* steps up about 3.6 times and stays so, or None.

    A sonic's or logger's program changed to write u* in km h-1 multiplies every later
    value by 3.6 from one day on. The nights' u* is set by the wind and the surface's
    roughness (u* = κU / ln((z - d) / z0), Stull 1988, ch. 9 (m)): between one fortnight
    and the next neither changes by such a factor in one step, and none stays so for six
    weeks, except through the surface itself. Leaf-out raises z0 over weeks, not in a
    day; snowmelt raises it about twofold (z0 of snow about 0.001 m, of short grass about
    0.01 m, Garratt 1992, ch. 3 (m): u* at a 3 m tower a factor ln(3000) / ln(300) = 1.4,
    and at most about 2 with the stable snow nights); a harvest lowers it (a step down,
    not judged here). A change of weather regime (a dry season's calm anticyclone giving
    way to fronts) can step the nights' median so, but not their calmest nights: a unit
    multiplies every value. So a step up of 2.57 to 5.04 times (:data:`KMH_FACTOR` within
    :data:`STEP_FIT`) in the nights' 10th percentile and median (:data:`STEP_QUANTILES`)
    over both spans of :data:`STEP_SPANS_DAYS` either side of one day (both spans within
    the record), whose later values divided by 3.6 read as towers' nights
    (:data:`TOWER_NIGHT_MEDIAN`), is named. A step back down (km h-1 for some months,
    then m s-1 again) is found by its step up; a record in km h-1 from its start has no
    step (:func:`ustar_beyond_surface_layer` judges its level).

    A unit multiplies the days' values too, while the nights' own changes do not reach
    the days so (review85): a windy season's onset (a monsoon's overcast, windy,
    near-neutral nights after a dry season's calm, stable ones) steps the nights' median
    and calm tail about 4 times but the days' wind far less (convective days before, the
    monsoon flow after), and the stable nights over snow step more at its melt than the
    days do (u* = κU / (ln(z / z0) + β z / L), β = 5, Stull 1988, ch. 9 (m)). So where
    the record holds daytime u* (:data:`_MIN_STEP_RECORDS` or more in each span), the
    days' median must step 2.57 to 5.04 times over both spans as well; a record of night
    u* alone is judged by its nights. The day named is located by a change point of the
    nights' log u* near the largest step (Page 1954 (m)); the figures returned are that
    day's where it steps so, else the largest step's.

    Parameters
    ----------
    ustar : array_like
        u* of each record as read [m s-1], NaN where missing; 0 (a logger's code for
        missing) is left out.
    is_night : array_like of bool
        The night mask of the records.
    index : pandas.DatetimeIndex
        Interval starts of the records, increasing.

    Returns
    -------
    dict or None
        ``at`` (the first day of the higher values, a Timestamp), ``ratios`` (the step
        of each quantile of :data:`STEP_QUANTILES` over each span of
        :data:`STEP_SPANS_DAYS`, quantiles within spans [-]), ``day_ratios`` (the days'
        median's step over each span, NaN where too few daytime u* [-]) and
        ``before``/``after`` (the nights' median u* over the fortnights either side
        [m s-1]), at the day named where it steps so, else at the largest step; None
        where no day so steps.

    References
    ----------
    Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9 (m).
    Garratt, J. R. (1992). The Atmospheric Boundary Layer. Cambridge University Press,
    ch. 3 (roughness lengths of snow, grass, crops and forests) (m).
    Page, E. S. (1954). Continuous inspection schemes. Biometrika 41(1/2):100-115 (the
    cumulative sum that locates a change) (m).
    """
    ustar = np.asarray(ustar, dtype=float)
    is_night = np.asarray(is_night, dtype=bool)
    with np.errstate(invalid="ignore"):
        present = np.isfinite(ustar) & (ustar > 0)
    index = pd.DatetimeIndex(index)
    times, values = index[present & is_night], ustar[present & is_night]
    if values.size < 2 * _MIN_STEP_RECORDS:
        return None
    # the first night record of each day: the spans before and after it
    days = pd.DatetimeIndex(np.unique(times.normalize()))
    low, high = KMH_FACTOR / STEP_FIT, KMH_FACTOR * STEP_FIT
    # the fortnights' night medians at every day first: a day whose median does not step
    # so, or whose later median in m s-1 is no tower's, cannot step, so the other figures
    # are taken at the other days alone (`wanted`), each day's the same values as at every
    # day (round speed62)
    (median_before,), (median_after,) = _span_quantiles(times, values, days,
                                                        STEP_SPANS_DAYS[0], (0.5,))
    with np.errstate(invalid="ignore", divide="ignore"):
        median_step = median_after / median_before
        converted = median_after / KMH_FACTOR
        wanted = np.flatnonzero((median_step >= low) & (median_step <= high)
                                & (converted >= TOWER_NIGHT_MEDIAN[0])
                                & (converted <= TOWER_NIGHT_MEDIAN[1]))
    if wanted.size == 0:
        return None
    ratios, medians = [], (median_before[wanted], median_after[wanted])
    for span in STEP_SPANS_DAYS:
        low_sides, high_sides = _span_quantiles(times, values, days[wanted], span,
                                                STEP_QUANTILES)
        for low_side, high_side in zip(low_sides, high_sides, strict=True):
            with np.errstate(invalid="ignore", divide="ignore"):
                ratios.append(high_side / low_side)
    # the days' median over the same spans, where the record holds daytime u*
    day_ratios = []
    for span in STEP_SPANS_DAYS:
        (low_side,), (high_side,) = _span_quantiles(index[present & ~is_night],
                                                    ustar[present & ~is_night], days[wanted],
                                                    span, (0.5,))
        with np.errstate(invalid="ignore", divide="ignore"):
            day_ratios.append(high_side / low_side)
    ratios = np.array(ratios)
    converted = converted[wanted]
    day_ratios = np.array(day_ratios)
    judged_days = np.all(np.isfinite(day_ratios), axis=0)
    with np.errstate(invalid="ignore"):
        stepped = (np.all((ratios >= low) & (ratios <= high), axis=0)
                   & (converted >= TOWER_NIGHT_MEDIAN[0]) & (converted <= TOWER_NIGHT_MEDIAN[1])
                   & (~judged_days | np.all((day_ratios >= low) & (day_ratios <= high),
                                            axis=0)))
    if not stepped.any():
        return None
    days = days[wanted]
    # the day of the largest step over every quantile and span together, then the record
    # the step starts at: the split of the log values within a fortnight either side
    # below which their cumulative departure from the mean is lowest (a CUSUM change
    # point, Page 1954 (m), of a step up: the low values' sum falls until the step, the
    # high values' raises it after; the lowest point, not the largest departure either
    # way, so a step down nearby is not taken for it)
    largest = int(np.flatnonzero(stepped)[np.argmax(np.log(ratios[:, stepped]).sum(axis=0))])
    near = times.searchsorted([days[largest] - pd.Timedelta(days=STEP_SPANS_DAYS[0]),
                               days[largest] + pd.Timedelta(days=STEP_SPANS_DAYS[0])])
    logs = np.log(values[near[0]:near[1]])
    split = near[0] + int(np.argmin(np.cumsum(logs - logs.mean())[:-1])) + 1
    at = times[split].normalize()
    # the figures named are the located day's where it steps so, else the largest step's
    # (a seasonal rise on top of the unit can take the day's own step beyond STEP_FIT)
    shown = int(days.searchsorted(at))
    if shown >= days.size or days[shown] != at or not stepped[shown]:
        shown = largest
    return {"at": at, "ratios": [float(r) for r in ratios[:, shown]],
            "day_ratios": [float(r) for r in day_ratios[:, shown]],
            "before": float(medians[0][shown]), "after": float(medians[1][shown])}


def _span_quantiles(times: pd.DatetimeIndex, values: np.ndarray, days: pd.DatetimeIndex,
                    span: int, quantiles) -> tuple[list, list]:
    """Quantiles of `values` over the `span` days before and after the start of each day.

    Parameters
    ----------
    times : pandas.DatetimeIndex
        Interval starts of the values, increasing.
    values : numpy.ndarray
        u* [m s-1], every one finite and positive.
    days : pandas.DatetimeIndex
        Midnights at which the record is split.
    span : int
        Days on either side [d].
    quantiles : sequence of float
        Quantiles [-].

    Returns
    -------
    before, after : list of numpy.ndarray
        Per quantile, its value over the span before each day's first record at or after
        midnight and over the span from that record on [m s-1]; NaN where a span leaves the
        record or holds fewer than :data:`_MIN_STEP_RECORDS` values.
    """
    empty = [np.full(days.size, np.nan) for _ in quantiles]
    if values.size < 2 * _MIN_STEP_RECORDS:
        return empty, [array.copy() for array in empty]
    first = np.minimum(times.searchsorted(days), values.size - 1)
    # the spans as positions: before, the values stamped in [t - span, t); after, those in
    # [t, t + span), t the day's first record (pandas' time windows closed "left" and,
    # on the record read backwards, "right")
    at, reach = times[first], pd.Timedelta(days=span)
    start = times.searchsorted(at, side="left")
    before = (times.searchsorted(at - reach, side="left"), start)
    after = (start, times.searchsorted(at + reach, side="left"))
    enough = np.flatnonzero((days - reach >= times[0].normalize()) & (days + reach <= times[-1])
                            & (before[1] - before[0] >= _MIN_STEP_RECORDS)
                            & (after[1] - after[0] >= _MIN_STEP_RECORDS))
    sides = []
    for low, high in (before, after):
        side = [np.full(days.size, np.nan) for _ in quantiles]
        for array, found in zip(side, _window_quantiles(values, low[enough], high[enough],
                                                        quantiles), strict=True):
            array[enough] = found
        sides.append(side)
    return sides[0], sides[1]


#: Values sorted at a time by :func:`_window_quantiles` (windows x their width), 16 MiB.
_SORTED_VALUES = 2**21


def _window_quantiles(values: np.ndarray, low: np.ndarray, high: np.ndarray,
                      quantiles) -> list[np.ndarray]:
    """Per quantile, its value over ``values[low[i]:high[i]]`` for each window i.

    The quantile of n values sorted ``v[0] <= ... <= v[n - 1]`` at the position ``h = q
    (n - 1)``: ``v[h]`` where h is whole, else ``v[j] + (v[j + 1] - v[j]) (h - j)``, j the
    whole part of h (linear interpolation between the order statistics, Hyndman & Fan
    1996, definition 7 (m)), in the operations and order of pandas' rolling quantile, so
    that the values are its own to the bit (``tests/test_ustar_step_windows.py``). Windows of
    at least one value; the windows are sorted a few at a time, their values padded with
    +inf to the widest.

    References
    ----------
    Hyndman, R. J., Fan, Y. (1996). Sample quantiles in statistical packages. The
    American Statistician 50(4):361-365 (m).
    """
    counts = high - low
    found = [np.full(counts.size, np.nan) for _ in quantiles]
    width = int(counts.max()) if counts.size else 0
    step = max(1, _SORTED_VALUES // max(width, 1))
    for start in range(0, counts.size, step):
        rows = slice(start, start + step)
        positions = low[rows, None] + np.arange(width)
        block = np.where(positions < high[rows, None],
                         values[np.minimum(positions, values.size - 1)], np.inf)
        block.sort(axis=1)
        row = np.arange(block.shape[0])
        for array, quantile in zip(found, quantiles, strict=True):
            place = quantile * (counts[rows] - 1).astype(float)
            whole = place.astype(np.int64)
            below = block[row, whole]
            # the value above the last is padding (+inf), taken only where h is whole
            above = block[row, np.minimum(whole + 1, width - 1)]
            with np.errstate(invalid="ignore"):
                between = below + (above - below) * (place - whole)
            array[rows] = np.where(place == whole, below, between)
    return found


def ustar_stepped_to_kmh(ustar, is_night, index: pd.DatetimeIndex,
                         column: str = "ustar") -> str | None:
    """A warning where the nights' u* steps up as km h-1 from one day on (:func:`ustar_step_up`).

    Parameters
    ----------
    ustar, is_night, index
        As :func:`ustar_step_up`.
    column : str
        The file's column of u*, to name it.

    Returns
    -------
    str or None
        The warning naming the column, the day, the step and the nights' medians either
        side; None where no day so steps.

    References
    ----------
    Stull, R. B. (1988). An Introduction to Boundary Layer Meteorology, ch. 9 (m).
    """
    step = ustar_step_up(ustar, is_night, index)
    if step is None:
        return None
    calm_short, median_short, calm_long, median_long = step["ratios"]
    span_short, span_long = STEP_SPANS_DAYS
    daytime_short, daytime_long = step["day_ratios"]
    # the days are judged only where both spans hold daytime u* (ustar_step_up): a
    # 14-day ratio alone was said to step "too" whatever it was, beside "nan"
    days_too = ("" if not np.isfinite(step["day_ratios"]).all() else
                f", and its days' median too ({daytime_short:.1f} and {daytime_long:.1f} times)")
    return (f"ustar (column {column!r}): from {step['at']:%Y-%m-%d} its nights' median "
            f"steps up {median_short:.1f} times ({step['before']:.2f} -> {step['after']:.2f} m s-1 "
            f"over the {span_short} days either side; {median_long:.1f} times over {span_long} "
            f"days), and its calm nights' too (the 10th percentile {calm_short:.1f} and "
            f"{calm_long:.1f} times){days_too}, as u* written in km h-1 ({KMH_FACTOR:g} "
            "times m s-1) from that day reads; the nights' u* follows the wind and the "
            "surface's roughness, which neither step so in a day and stay so for weeks "
            "(snowmelt about doubles it, a harvest lowers it, a new weather regime or a "
            "windy season steps the nights more than the days): the calm nights "
            "after that day would be judged at a threshold of the other unit; convert the "
            "later values to m s-1 (km h-1 / "
            f"{KMH_FACTOR:g}) or check what changed at the tower that day")
