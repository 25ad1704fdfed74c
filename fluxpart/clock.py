"""Clock and site-geometry check: does measured Rg follow the sun the site's settings predict?

A clock one hour off, stamps in daylight-saving civil time or a latitude with the
wrong sign pass every range check, yet they move the night mask, the light
response and the budgets. The sun is an outside clock: measured global radiation
Rg must rise, peak and set with the potential (top-of-atmosphere) radiation that
:mod:`fluxpart.solar` computes from the site's latitude, longitude and
``utc_offset``.

Method (pure functions over arrays):

1. The record is cut into calendar months. In each month with at least
   :data:`MIN_DAYS_PER_WINDOW` days of Rg and with daylight, an upper-envelope
   diurnal composite of Rg is formed: for each time of day, the
   :data:`ENVELOPE_QUANTILE` quantile over the month's days (the clear-sky shape;
   clouds lower Rg, they rarely move the clear-sky curve in time).
2. The time shift of the month is the lag that maximises the Pearson correlation
   between that envelope and the potential radiation composite computed at lagged
   stamps: first by whole records around the clock, then refined to a few minutes
   by recomputing the potential radiation at sub-record lags and fitting a parabola
   through the best three.
3. The record's shift is the median of the monthly shifts; its spread is the
   scaled median absolute deviation. A shift is declared only where the median
   reaches :func:`shift_threshold_minutes` (two thirds of a record, at least
   20 min) and two thirds of the months agree in sign and at least half of it.
4. Daylight saving: the monthly shifts fall in two groups one hour apart, and the
   later group is one contiguous block of months of the year.
5. Hemisphere: the clear-day (upper quantile) daily Rg of each month, divided by
   the daily potential radiation, should be about constant through the seasons;
   with the latitude's sign flipped it swings with the seasons. The latitude is
   declared in the wrong hemisphere only where the flipped latitude explains the
   seasonal cycle clearly better (see :func:`check_hemisphere`).

The check says when it cannot judge: fewer than :data:`MIN_WINDOWS` usable months
(short records, polar night, Rg missing or without a diurnal cycle) or, for the
hemisphere, too little seasonal contrast (near the equator, or a short record).

References
----------
Michalsky, J. J. (1988). The Astronomical Almanac's algorithm for approximate solar
position (1950–2050). Solar Energy 40(3):227–235. doi:10.1016/0038-092X(88)90045-X
(the potential radiation this check compares against, via :mod:`fluxpart.solar`).

Iqbal, M. (1983). An Introduction to Solar Radiation. Academic Press, Toronto,
ch. 1 (solar noon, day length and their dependence on latitude and season) (m).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ._quantile import nanquantile
from .robust_scale import scaled_mad
from .site import FRACTIONAL_UTC_OFFSETS
from .solar import interval_sun, potential_at_latitude, potential_radiation

__all__ = [
    "ClockVerdict",
    "ENVELOPE_QUANTILE",
    "MIN_DAYS_PER_WINDOW",
    "MIN_WINDOWS",
    "check_clock",
    "check_hemisphere",
    "check_latitude",
    "monthly_shifts",
    "shift_threshold_minutes",
]

#: Quantile of Rg over a month's days, per time of day, taken as the clear-sky
#: envelope [1]; 0.9 (about the 3rd clearest of 30 days), our choice: high enough
#: to follow clear-sky timing in cloudy climates, below the maximum so one
#: cloud-enhanced spike does not set it.
ENVELOPE_QUANTILE = 0.9
#: Fewest days with Rg (at least 80 % of the day's records present) for a month to
#: be used [days]; our choice: a third of a month, so the envelope is set by
#: several days.
MIN_DAYS_PER_WINDOW = 10
#: Fewest usable months before the check judges the clock [1]; our choice: one
#: month alone cannot show that its estimate is consistent.
MIN_WINDOWS = 2
#: Lowest correlation between the Rg envelope and the lagged potential radiation
#: for a month to count [1]; our choice: below it the month's Rg has no clear
#: diurnal cycle (broken or shaded sensor) and its timing is not evidence.
MIN_CORRELATION = 0.8
#: Smallest daily range of the composites to call a month sunlit [W m-2]; our
#: choice, about 2 % of the noon potential radiation at mid-latitudes.
MIN_DIURNAL_RANGE = 20.0
#: Level, as a share of the composite's daily range above its minimum, at which the
#: rising and falling crossings are timed [1]; our choice: low enough that diffuse
#: light, which a tilted or partly shaded sensor still sees from the whole sky,
#: dominates; high enough to stay clear of the night offset of the sensor.
EDGE_LEVEL = 0.15
#: Smallest standard deviation across the record's months of log(P / Q), the
#: potential radiation at the configured over the flipped latitude, for the
#: hemisphere to be judged [1]; 0.12, our choice: reached from about 8° of latitude
#: with a year of data; below it a season of clouds can mimic the flip.
MIN_HEMISPHERE_CONTRAST = 0.12
#: Smallest seasonal swing (standard deviation across months) of the day-length
#: mismatch between the Rg envelope and the potential radiation for a latitude to be
#: called flipped [min]; 20 min, our choice: day length at the right latitude
#: matches within minutes, while a flipped latitude's differs by its seasonal range
#: (about 1.6 h at 12°, FAO-56 eq. 34).
MIN_DAYLENGTH_SWING = 20.0
#: Smallest distance between the configured latitude and the one whose day lengths
#: fit the Rg envelope best for the latitude to be called wrong [degrees]; 10°, our
#: choice: a tower's latitude is known to a small fraction of a degree, so an error this
#: large is another site's file or a mistyped value, and at mid-latitudes it changes the
#: seasonal range of day length by more than an hour (FAO-56 eq. 34), well above the
#: :data:`MIN_DAYLENGTH_SWING` the Rg edges resolve.
MIN_LATITUDE_ERROR = 10.0
#: Fewest sunlit months with a sunrise and a sunset for the latitude to be judged [1];
#: our choice: a third of a year shows the seasonal course of day length.
MIN_LATITUDE_MONTHS = 4
#: Largest distance of a one- or two-month shift from a multiple of 30 min for it to be
#: read as a clock step [min]; 10 min, our choice: a third of a half-hour record, the
#: resolution of the monthly estimates plus their cloud scatter (a few minutes on correct
#: sites), well under the 30 min between the steps clock settings come in.
STEP_TOLERANCE = 10.0
#: Scaled median absolute deviations of the other months' shifts by which a one- or
#: two-month shift must stand out [1]; 6, our choice: a departure of six robust standard
#: deviations has a chance far below one in a thousand site-years under Gaussian scatter
#: (common practice for robust outlier rules), and the threshold of
#: :func:`shift_threshold_minutes` applies as well.
SHORT_RUN_ROBUST_SIGMAS = 6.0
#: Fewest months with a sunrise and a sunset, and the fewest months from the first to the
#: last, for a drifting clock to be judged [1]; 6 and 9, our choice: a trend must be seen
#: over most of a year, so that a seasonal course (a tilted or shaded sensor, whose shift
#: follows the sun's declination and comes back within the year) cannot pass for one.
DRIFT_MIN_MONTHS = 6
DRIFT_MIN_SPAN_MONTHS = 9
#: Largest robust scatter of the monthly shifts about their straight line in time for a
#: drifting clock [min]; 6, our choice: a few minutes of cloud scatter on correct sites
#: (the monthly estimates' resolution), well under the 20 min or more a drift must add up
#: to (:func:`shift_threshold_minutes`).
DRIFT_MAX_SCATTER = 6.0
_DAYLIGHT_SAVING_STEP = 60.0      # minutes: the daylight-saving change of the clock
#: Months that can hold daylight-saving time, by hemisphere: in the north from the last
#: Sunday of March (European Union) or the second Sunday of March (United States) to the
#: last Sunday of October or the first Sunday of November; in the south from the last
#: Sunday of September (New Zealand) or the first Sunday of October (Australia, Chile
#: roughly) to the first Sunday of April (time-zone database rules (m)). Months a
#: clock an hour ahead covers outside these (January to June in the north) are not
#: summer time but a clock changed once, named by the shifted-run check instead.
_SAVING_MONTHS = {"north": frozenset(range(3, 12)),
                  "south": frozenset({9, 10, 11, 12, 1, 2, 3, 4})}


def _daylength_mismatch(used: pd.DataFrame) -> np.ndarray:
    """Width of each month's Rg envelope minus that of the potential radiation [min].

    A clock error moves sunrise and sunset alike and leaves this unchanged; an
    obstruction on one side of the day (morning fog, a tree line or building east of
    the sensor) moves one edge only, so a midpoint moved by s comes with a width
    changed by about 2 s. NaN where a month has no sunrise and sunset to time.
    """
    if "daylength_rg" not in used.columns:
        return np.full(len(used), np.nan)
    return (used["daylength_rg"] - used["daylength_potential"]).to_numpy(dtype=float)


@dataclass(frozen=True)
class ClockVerdict:
    """What the clock and geometry check found.

    Attributes
    ----------
    status : str
        ``"consistent"``, ``"shifted"``, ``"daylight_saving"``, ``"hemisphere"``,
        ``"latitude"`` (a latitude of the right sign but far off the one Rg's day
        lengths give) or ``"cannot_judge"``.
    shift_minutes : float
        Median monthly shift of Rg against the sun [min]; positive when Rg comes
        later than the site's settings predict. NaN when not judged.
    spread_minutes : float
        Scaled median absolute deviation of the monthly shifts [min].
    months_used : int
        Months that entered the estimate.
    suggested_utc_offset : float or None
        The ``[site] utc_offset`` that would remove the shift [hours], where the
        shift is one.
    problems : tuple of str
        Each problem in one line, with what to change.
    notes : tuple of str
        Why a part could not be judged, and other remarks that are not problems.
    hemisphere : str
        ``"consistent"``, ``"mismatch"`` or ``"cannot_judge"``.
    months : pandas.DataFrame
        One row per month: ``days``, ``shift_minutes``, ``correlation``, ``used``,
        ``reason``.
    """

    status: str
    shift_minutes: float
    spread_minutes: float
    months_used: int
    suggested_utc_offset: float | None = None
    problems: tuple = ()
    notes: tuple = ()
    hemisphere: str = "cannot_judge"
    months: pd.DataFrame = field(default_factory=pd.DataFrame, repr=False)

    def to_dict(self) -> dict:
        """The verdict as plain JSON-compatible values (for the result's provenance)."""
        def number(value):
            return None if value is None or not np.isfinite(value) else round(float(value), 1)
        return {"status": self.status, "shift_minutes": number(self.shift_minutes),
                "spread_minutes": number(self.spread_minutes),
                "months_used": int(self.months_used),
                "suggested_utc_offset": self.suggested_utc_offset,
                "hemisphere": self.hemisphere, "problems": list(self.problems),
                "notes": list(self.notes)}


def shift_threshold_minutes(interval_minutes: float) -> float:
    """Smallest median shift the check declares a clock problem [min].

    Two thirds of a record, at least 20 min: 20 min for 30-minute records and
    40 min for hourly ones. A shift of one record (the smallest a stamp or offset
    mistake makes, e.g. end stamps read as start stamps) is caught with margin,
    while the few minutes to tens of minutes that a slightly tilted or partly
    shaded Rg sensor moves the apparent solar noon (a tilt β moves it by about
    β / cos φ of hour angle for the direct beam; Iqbal 1983, ch. 1 (m)) are not
    called a clock error. Our choice.
    """
    return max(20.0, 2.0 * float(interval_minutes) / 3.0)


def _day_slot_layout(index: pd.DatetimeIndex, interval_minutes: float):
    """Row (day) and column (time-of-day slot) of each record in a day x slot matrix."""
    slots = int(round(1440.0 / interval_minutes))
    midnight = index.normalize()
    minute_of_day = ((index - midnight) / pd.Timedelta(minutes=1)).to_numpy()
    slot = np.clip(np.floor(minute_of_day / interval_minutes).astype(int), 0, slots - 1)
    day = ((midnight - midnight[0]) / pd.Timedelta(days=1)).to_numpy().astype(int)
    return day, slot


def _day_slot_matrix(index: pd.DatetimeIndex, values: np.ndarray, interval_minutes: float):
    """Values as a (day x time-of-day slot) matrix, NaN where absent; and the days."""
    slots = int(round(1440.0 / interval_minutes))
    day, slot = _day_slot_layout(index, interval_minutes)
    matrix = np.full((day[-1] + 1, slots), np.nan)
    matrix[day, slot] = values
    first = index[0].normalize()
    days = pd.DatetimeIndex(first + pd.to_timedelta(np.arange(day[-1] + 1), unit="D"))
    return matrix, days


def _lagged_potential(index: pd.DatetimeIndex, position, interval_minutes: float,
                      lags, potential=None) -> dict:
    """Potential radiation of every record with its stamps moved back by each lag [W m-2].

    ``potential_radiation(index - lag)`` for each lag [min]. It is computed record by
    record, so on a regular record a lag of minus j sub-steps gives the values of the
    lag of 6 - j sub-steps one record later, and a lag of one whole record those of no
    lag one record earlier: those are taken from one extra record computed at each end
    instead of computing them again (the stamps are checked to be the same to the
    nanosecond, so the values are the same). `potential`, the record's own
    ``potential_radiation(index)`` where the caller has it (the run's solar geometry),
    is the lag 0's: only its two extra records are computed then.
    """
    interval = pd.Timedelta(minutes=interval_minutes)
    moved = {float(lag): pd.Timedelta(minutes=float(lag)) for lag in lags}
    extended = pd.DatetimeIndex([index[0] - interval]).append(index).append(
        pd.DatetimeIndex([index[-1] + interval]))
    regular = len(index) > 1 and bool(((extended[1:] - extended[:-1]) == interval).all())
    out, computed = {}, {}
    for lag in sorted(moved, key=lambda value: (value < 0, abs(value))):
        later = next((other for other in computed if moved[other] - interval == moved[lag]),
                     None)
        earlier = next((other for other in computed
                        if moved[other] + interval == moved[lag]), None)
        if regular and later is not None:
            out[lag] = computed[later][2:]
        elif regular and earlier is not None:
            out[lag] = computed[earlier][:-2]
        elif regular and lag == 0.0 and potential is not None:
            ends = potential_radiation(extended[[0, -1]], *position, interval_minutes)
            computed[lag] = np.concatenate([ends[:1], np.asarray(potential, dtype=float),
                                            ends[1:]])
            out[lag] = computed[lag][1:-1]
        elif regular:
            computed[lag] = potential_radiation(extended - moved[lag], *position,
                                                interval_minutes)
            out[lag] = computed[lag][1:-1]
        else:
            out[lag] = potential_radiation(index - moved[lag], *position, interval_minutes)
    return out


#: Rows at which a potential radiation passed in is checked to be the record's own.
_CHECKED_ROWS = 97


def _own_potential(potential, index: pd.DatetimeIndex, position, interval_minutes: float
                   ) -> bool:
    """Whether `potential` [W m-2] is ``potential_radiation(index, *position,
    interval_minutes)``: one value per record and the same bits at :data:`_CHECKED_ROWS`
    rows spread over the record (each record's value is computed from its own stamp
    alone). A potential of another record (trimmed, reindexed, shifted) or of other
    settings would move the clock's verdict without a word (review77: one of an hour
    later read as Rg 60 min late); it is computed afresh instead.
    """
    potential = np.asarray(potential, dtype=float)
    if potential.shape != (len(index),):
        return False
    rows = np.unique(np.linspace(0, len(index) - 1, _CHECKED_ROWS).astype(np.intp))
    own = potential_radiation(index[rows], *position, interval_minutes)
    return bool(np.array_equal(own, potential[rows]))


def _correlation(envelope: np.ndarray, model: np.ndarray) -> float:
    ok = np.isfinite(envelope) & np.isfinite(model)
    if ok.sum() < 4:
        return np.nan
    a = envelope[ok] - envelope[ok].mean()
    b = model[ok] - model[ok].mean()
    scale = np.sqrt((a * a).sum() * (b * b).sum())
    return float((a * b).sum() / scale) if scale > 0 else np.nan


def _correlations(envelope: np.ndarray, models: np.ndarray) -> np.ndarray:
    """``_correlation(envelope, row)`` for every row of `models`, bit for bit.

    Where everything is finite (the usual month) the rows are done in one pass;
    otherwise each row takes its own mask.
    """
    if envelope.size < 4 or not (np.isfinite(envelope).all() and np.isfinite(models).all()):
        return np.array([_correlation(envelope, row) for row in models])
    a = envelope - envelope.mean()
    b = models - models.mean(axis=1, keepdims=True)
    scale = np.sqrt((a * a).sum() * (b * b).sum(axis=1))
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(scale > 0, (a * b).sum(axis=1) / scale, np.nan)


def _rolled(values: np.ndarray, shifts) -> np.ndarray:
    """``np.roll(values, k)`` for each k in `shifts`, one row each."""
    return values[(np.arange(len(values)) - np.asarray(shifts)[:, None]) % len(values)]


def _crossings(curve: np.ndarray, interval_minutes: float, level: float) -> tuple:
    """Midpoint [minute of the day] and width [min] between a level's rising and falling crossing.

    `level` is a share of the curve's range above its minimum. NaN where the curve
    does not cross it on both sides of its peak within the day.
    """
    slots = len(curve)
    if not np.isfinite(curve).all() or np.ptp(curve) <= 0:
        return np.nan, np.nan
    peak = int(np.argmax(curve))
    rolled = np.roll(curve, slots // 2 - peak)             # peak in the middle
    low, high = rolled.min(), rolled.max()
    threshold = low + level * (high - low)
    centre = slots // 2
    below = rolled < threshold
    left = np.flatnonzero(below[:centre])
    right = np.flatnonzero(below[centre:])
    if left.size == 0 or right.size == 0:
        return np.nan, np.nan
    i = left[-1]                                           # last below before the peak
    j = centre + right[0]                                  # first below after the peak
    rise = i + (threshold - rolled[i]) / (rolled[i + 1] - rolled[i])
    fall = j - 1 + (rolled[j - 1] - threshold) / (rolled[j - 1] - rolled[j])
    middle = 0.5 * (rise + fall) - (slots // 2 - peak)     # in slots, unrolled
    return float(middle * interval_minutes), float((fall - rise) * interval_minutes)


def _crossing_widths(curves: np.ndarray, interval_minutes: float, level: float) -> np.ndarray:
    """``_crossings(curve, interval_minutes, level)[1]`` of every row of `curves` [min].

    The same steps on all rows at once (each row's peak put in the middle, the last slot
    below the level before it and the first after it, the same interpolation), so the
    widths are :func:`_crossings`' bit for bit; NaN where it gives NaN.
    """
    curves = np.asarray(curves, dtype=float)
    count, slots = curves.shape
    widths = np.full(count, np.nan)
    if count == 0:
        return widths
    with np.errstate(invalid="ignore"):
        valid = np.isfinite(curves).all(axis=1) & (np.ptp(curves, axis=1) > 0)
    rows = np.flatnonzero(valid)
    if rows.size == 0:
        return widths
    chosen = curves[rows]
    peak = np.argmax(chosen, axis=1)
    centre = slots // 2
    # np.roll(curve, centre - peak) of each row: element k is curve[(k - centre + peak) % slots]
    rolled = np.take_along_axis(
        chosen, (np.arange(slots) - centre + peak[:, None]) % slots, axis=1)
    low, high = rolled.min(axis=1), rolled.max(axis=1)
    threshold = low + level * (high - low)
    below = rolled < threshold[:, None]
    left_any = below[:, :centre].any(axis=1)
    right_any = below[:, centre:].any(axis=1)
    ok = left_any & right_any
    i = centre - 1 - np.argmax(below[:, :centre][:, ::-1], axis=1)   # last below before the peak
    j = centre + np.argmax(below[:, centre:], axis=1)                  # first below after it
    at = np.arange(rows.size)
    i, j = np.where(ok, i, 0), np.where(ok, j, 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        rise = i + (threshold - rolled[at, i]) / (rolled[at, i + 1] - rolled[at, i])
        fall = j - 1 + (rolled[at, j - 1] - threshold) / (rolled[at, j - 1] - rolled[at, j])
    widths[rows[ok]] = ((fall - rise) * interval_minutes)[ok]
    return widths


def monthly_shifts(index, rg, latitude, longitude, utc_offset, interval_minutes, *,
                   potential=None) -> pd.DataFrame:
    """Time shift of measured Rg against potential radiation, month by month.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts, local standard time, regular.
    rg : array_like
        Measured global radiation [W m-2]; NaN where missing.
    latitude, longitude : float
        Site position [degrees north, east].
    utc_offset : float
        The configured offset of the stamps from UTC [hours].
    interval_minutes : float
        Record interval [min].
    potential : array_like, optional
        ``potential_radiation(index, latitude, longitude, utc_offset, interval_minutes)``
        [W m-2] where the caller has it already (the run's solar geometry): not
        computed again where it is the record's own (:func:`_own_potential`), else
        computed afresh.

    Returns
    -------
    pandas.DataFrame
        Indexed by month start: ``month`` (1–12), ``days`` (days with Rg),
        ``shift_minutes`` (lag of Rg behind the sun [min], positive = Rg later),
        ``correlation`` (at that lag), ``rg_daily`` (clear-day, i.e.
        :data:`ENVELOPE_QUANTILE`, daily mean Rg [W m-2]), ``potential_daily``
        (mean potential radiation [W m-2]), ``flipped_daily`` (the same at the
        latitude of the other sign [W m-2]), ``used`` (bool) and ``reason`` (why a
        month was not used).

    References
    ----------
    Michalsky, J. J. (1988). Solar Energy 40(3):227–235 (via :mod:`fluxpart.solar`).
    """
    index = pd.DatetimeIndex(index)
    rg = np.asarray(rg, dtype=float)
    interval = float(interval_minutes)
    slots = int(round(1440.0 / interval))
    position = (latitude, longitude, utc_offset)
    rg_matrix, days = _day_slot_matrix(index, rg, interval)
    layout = _day_slot_layout(index, interval)

    step = interval / 6.0
    fine_lags = np.arange(-6, 7) * step             # sub-record lags [min]
    if potential is not None and not _own_potential(potential, index, position, interval):
        potential = None                # another record's: the lag 0 computed afresh
    shifted = _lagged_potential(index, position, interval, fine_lags, potential)
    present = np.isfinite(rg_matrix)
    good_day = present.sum(axis=1) >= 0.8 * slots
    months = days.to_period("M")

    # every lag's course and the flipped latitude's as one (lag, day, slot) array, so that
    # a month's composites are one reduction; each layer's sums over the days run in the
    # same order as a matrix's own (the days' axis is not the innermost)
    courses = np.full((len(fine_lags) + 1, *rg_matrix.shape), np.nan)
    for layer, values in enumerate([*(shifted[float(lag)] for lag in fine_lags),
                                    potential_radiation(index, -latitude, longitude,
                                                        utc_offset, interval)]):
        courses[layer][layout] = values
    lag_layer = {float(lag): layer for layer, lag in enumerate(fine_lags)}

    rows = []
    for month in months.unique():
        in_month = (months == month) & good_day
        row = {"month_start": month.start_time, "month": month.month,
               "days": int(in_month.sum()), "shift_minutes": np.nan, "correlation": np.nan,
               "edge_shift_minutes": np.nan, "sun_sets": False, "daylength_rg": np.nan,
               "daylength_potential": np.nan, "daylength_flipped": np.nan,
               "rg_daily": np.nan, "potential_daily": np.nan, "flipped_daily": np.nan,
               "used": False, "reason": ""}
        rows.append(row)
        if row["days"] < MIN_DAYS_PER_WINDOW:
            row["reason"] = f"{row['days']} days with Rg (fewer than {MIN_DAYS_PER_WINDOW})"
            continue
        block = np.where(present[in_month], rg_matrix[in_month], np.nan)
        envelope = nanquantile(block, ENVELOPE_QUANTILE, axis=0)
        mask = present[in_month]
        month_courses = np.nanmean(np.where(mask, courses[:, in_month], np.nan), axis=1)
        composite = {lag: month_courses[layer] for lag, layer in lag_layer.items()}
        flipped_composite = month_courses[-1]
        row["potential_daily"] = float(np.nanmean(composite[0.0]))
        row["flipped_daily"] = float(np.nanmean(flipped_composite))
        daily_rg = np.nanmean(block, axis=1)
        row["rg_daily"] = float(np.quantile(daily_rg, ENVELOPE_QUANTILE))
        if np.ptp(composite[0.0]) < MIN_DIURNAL_RANGE:
            row["reason"] = "no daylight in the potential radiation (polar night)"
            continue
        if np.nanmax(envelope) - np.nanmin(envelope) < MIN_DIURNAL_RANGE:
            row["reason"] = "measured Rg has no diurnal cycle"
            continue
        coarse = _correlations(envelope, _rolled(composite[0.0], range(slots)))
        if not np.isfinite(coarse).any():
            row["reason"] = "no correlation can be formed"
            continue
        best = int(np.nanargmax(coarse))
        records = best if best <= slots // 2 else best - slots
        scores = _correlations(envelope, np.stack([np.roll(composite[lag], records)
                                                   for lag in fine_lags]))
        i = int(np.nanargmax(scores))
        lag = records * interval + fine_lags[i]
        if 0 < i < len(fine_lags) - 1 and np.isfinite(scores[i - 1:i + 2]).all():
            left, centre, right = scores[i - 1:i + 2]
            curvature = left - 2.0 * centre + right
            if curvature < 0:
                lag += step * 0.5 * (left - right) / curvature
        lag = (lag + 720.0) % 1440.0 - 720.0
        row["shift_minutes"] = float(lag)
        (rg_middle, rg_width), (sun_middle, sun_width) = (
            _crossings(envelope, interval, EDGE_LEVEL),
            _crossings(composite[0.0], interval, EDGE_LEVEL))
        row["edge_shift_minutes"] = float((rg_middle - sun_middle + 720.0) % 1440.0 - 720.0)
        row["sun_sets"] = bool(np.nanmin(composite[0.0]) < 1.0)
        row["daylength_rg"] = rg_width
        row["daylength_potential"] = sun_width
        row["daylength_flipped"] = _crossings(flipped_composite, interval, EDGE_LEVEL)[1]
        row["correlation"] = float(scores[i])
        if scores[i] < MIN_CORRELATION:
            row["reason"] = (f"Rg envelope matches the sun poorly (r = {scores[i]:.2f} < "
                             f"{MIN_CORRELATION})")
            continue
        row["used"] = True
    table = pd.DataFrame(rows).set_index("month_start") if rows else pd.DataFrame(
        columns=["month", "days", "shift_minutes", "correlation", "rg_daily",
                 "potential_daily", "flipped_daily", "used", "reason"])
    return table


def check_hemisphere(index, rg, latitude, longitude, utc_offset, interval_minutes,
                     months: pd.DataFrame | None = None) -> tuple[str, str]:
    """Is the latitude's sign consistent with the seasonal cycle of measured Rg?

    Parameters
    ----------
    index, rg, latitude, longitude, utc_offset, interval_minutes
        As for :func:`monthly_shifts`.
    months : pandas.DataFrame, optional
        The output of :func:`monthly_shifts` for the configured latitude, if at hand.

    Returns
    -------
    verdict : str
        ``"consistent"``, ``"mismatch"`` or ``"cannot_judge"``.
    detail : str
        One line saying why.

    Notes
    -----
    For each month with at least :data:`MIN_DAYS_PER_WINDOW` days of Rg, the
    clear-day daily mean Rg E (the :data:`ENVELOPE_QUANTILE` of daily means) is
    compared with the mean potential radiation at the configured latitude P and
    at the flipped latitude Q. Clear-sky transmittance varies little through the
    year, so ``log((E + 5) / (P + 5))`` should be nearly constant. The latitude
    is a mismatch where the standard deviation of that log ratio across months is
    more than 1.5 times the one with Q and the correlation of E with Q exceeds the
    one with P by 0.8 or more (E follows the other hemisphere's seasons); and,
    where at least three used months have a sunrise and a sunset, the day length
    agrees: the width of the Rg envelope at :data:`EDGE_LEVEL` minus that of the
    potential radiation swings through the year (standard deviation above
    :data:`MIN_DAYLENGTH_SWING` and twice the one with Q). Clouds change the
    clear-day Rg; they do not change the day length. Judged
    only with at least three months and where the two hemispheres differ enough
    (:data:`MIN_HEMISPHERE_CONTRAST`; not near the equator). The 5 W m-2 offset
    keeps polar-night months finite. Thresholds: our choice; day length
    and daily extraterrestrial radiation against latitude: Allen et al. (1998),
    FAO-56, eqs. 21 and 34.

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). Crop
    evapotranspiration. FAO Irrigation and Drainage Paper 56, Rome.
    """
    if months is None:
        months = monthly_shifts(index, rg, latitude, longitude, utc_offset, interval_minutes)
    enough = months[months["days"] >= MIN_DAYS_PER_WINDOW]
    if len(enough) < 3:
        return "cannot_judge", (f"hemisphere not judged: {len(enough)} month(s) with "
                                f"{MIN_DAYS_PER_WINDOW} or more days of Rg (3 needed)")
    q = enough["flipped_daily"].to_numpy()
    e = enough["rg_daily"].to_numpy()
    p = enough["potential_daily"].to_numpy()
    contrast = float(np.nanstd(np.log((p + 5.0) / (q + 5.0))))
    if contrast < MIN_HEMISPHERE_CONTRAST:
        return "cannot_judge", ("hemisphere not judged: the months of the record differ too "
                                "little between the two hemispheres (near the equator, or a "
                                "short record)")
    if np.nanmax(e) < MIN_DIURNAL_RANGE:
        return "cannot_judge", "hemisphere not judged: measured Rg shows no daylight"
    with np.errstate(invalid="ignore"):   # a month of negative Rg (net radiation): NaN, skipped
        spread = np.nanstd(np.log((e + 5.0) / (p + 5.0)))
        spread_flipped = np.nanstd(np.log((e + 5.0) / (q + 5.0)))
    r_configured = _correlation(e, p)
    r_flipped = _correlation(e, q)
    lengths = months[months["used"]]
    lengths = lengths[np.isfinite(lengths[["daylength_rg", "daylength_potential",
                                           "daylength_flipped"]]).all(axis=1)]
    if len(lengths) >= 3:
        # day length does not care for clouds: the width of the Rg envelope at a level
        # minus that of the potential radiation stays nearly constant through the year
        # at the right latitude and swings with the seasons at the flipped one
        off = np.std(lengths["daylength_rg"] - lengths["daylength_potential"])
        off_flipped = np.std(lengths["daylength_rg"] - lengths["daylength_flipped"])
        days_say_flipped = off > 2.0 * off_flipped and off > MIN_DAYLENGTH_SWING
    else:
        days_say_flipped = True          # no sunrise and sunset to time: radiation alone
    if (spread > 1.5 * spread_flipped and r_flipped - r_configured >= 0.8
            and days_say_flipped):
        return "mismatch", (
            f"the seasonal cycle of Rg fits latitude {-latitude:g} (r = {r_flipped:.2f}), not "
            f"the configured {latitude:g} (r = {r_configured:.2f}): the latitude likely has "
            f"the wrong sign; set [site] latitude = {-latitude:g}")
    return "consistent", (f"seasonal cycle of Rg consistent with latitude {latitude:g} "
                          f"(r = {r_configured:.2f})")


def check_latitude(index, rg, latitude, longitude, utc_offset, interval_minutes,
                   months: pd.DataFrame | None = None, *,
                   verdict_only: bool = False) -> tuple[str, str, float]:
    """Does the configured latitude give the day lengths measured Rg shows?

    Parameters
    ----------
    index, rg, latitude, longitude, utc_offset, interval_minutes
        As for :func:`monthly_shifts`.
    months : pandas.DataFrame, optional
        The output of :func:`monthly_shifts` for the configured latitude, if at hand.
    verdict_only : bool, optional
        Skip the scan where the configured latitude's swing alone decides
        ``"consistent"`` (at most :data:`MIN_DAYLENGTH_SWING`: neither a mismatch nor a
        one-sided shade can be called, whatever latitude fits best); `best` is then NaN.
        :func:`check_clock` reads `best` only where the verdict is ``"cannot_judge"``.

    Returns
    -------
    verdict : str
        ``"consistent"``, ``"mismatch"`` or ``"cannot_judge"``.
    detail : str
        One line saying why.
    best : float
        The latitude whose day lengths fit best [degrees]: of the configured sign, or
        of the other where the configured sign's best lies near the equator (see
        Notes); NaN where not judged (or not scanned, `verdict_only`).

    Notes
    -----
    Day length does not care for clouds: at the right latitude the width of each
    used month's Rg envelope at :data:`EDGE_LEVEL` minus that of the potential
    radiation stays nearly constant through the year (its standard deviation was
    3-22 min on generated sites from 37° S to 67° N), while at a wrong latitude it
    swings with the seasons (day length against latitude and season: Allen et al.
    1998, FAO-56, eq. 34). Latitudes of the configured sign are scanned (5°, then
    1° around the best), and those of the other sign too where that best lies within
    :data:`MIN_LATITUDE_ERROR` of the equator (the other sign's best taken where it lies
    that far from the equator and fits better); the latitude is a mismatch where the best
    lies
    :data:`MIN_LATITUDE_ERROR` or more from the configured one and the swing at the
    configured latitude exceeds both :data:`MIN_DAYLENGTH_SWING` and twice the swing
    at the best. A site TOML pointing at another site's file, or a latitude typed
    wrongly, moves the night mask and the potential radiation the screening compares
    Rg with. The sign is otherwise :func:`check_hemisphere`'s concern; but near the
    equator it cannot be judged there, and a site of the other hemisphere pulls the
    configured sign's best to the equator, within :data:`MIN_LATITUDE_ERROR` of a
    latitude configured as 0 (a template's value) or -2: such a site was called
    consistent until review60 (a site at 49° S configured as 0, its day lengths
    swinging 135 min against the sun's).

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). Crop
    evapotranspiration. FAO Irrigation and Drainage Paper 56, Rome.
    """
    interval = float(interval_minutes)
    if months is None:
        months = monthly_shifts(index, rg, latitude, longitude, utc_offset, interval)
    usable = months[months["used"] & months["sun_sets"]
                    & np.isfinite(months["daylength_rg"])
                    & np.isfinite(months["daylength_potential"])]
    if len(usable) < MIN_LATITUDE_MONTHS:
        return "cannot_judge", (f"latitude not judged: {len(usable)} month(s) of Rg with a "
                                f"sunrise and a sunset ({MIN_LATITUDE_MONTHS} needed)"), np.nan
    rg_width = usable["daylength_rg"].to_numpy()
    configured = float(np.std(rg_width - usable["daylength_potential"].to_numpy()))
    if verdict_only and not configured > MIN_DAYLENGTH_SWING:
        # both calls below ask configured > MIN_DAYLENGTH_SWING: decided without the scan
        return "consistent", _consistent_latitude(latitude, configured), np.nan
    index = pd.DatetimeIndex(index)
    rg_matrix, days = _day_slot_matrix(index, np.asarray(rg, dtype=float), interval)
    layout = _day_slot_layout(index, interval)
    present = np.isfinite(rg_matrix)
    good_day = present.sum(axis=1) >= 0.8 * rg_matrix.shape[1]
    month_of_day = days.to_period("M").start_time
    # the good days of each usable month, month after month (each month's mean course
    # from one slice of them)
    month_days = [np.flatnonzero((month_of_day == start) & good_day) for start in usable.index]
    sizes = np.array([days_of.size for days_of in month_days])
    rows = np.concatenate(month_days)
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    filled = np.flatnonzero(sizes)                    # the months with good days

    sun = interval_sun(index, longitude, utc_offset, interval)    # the same at every latitude

    def swing(candidate: float) -> float:
        """Standard deviation over the usable months of Rg's minus the sun's width [min]."""
        matrix = np.full(rg_matrix.shape, np.nan)
        matrix[layout] = potential_at_latitude(sun, candidate)
        widths = np.full(len(month_days), np.nan)      # a month without good days: NaN
        values = np.where(present[rows], matrix[rows], np.nan)
        missing = np.isnan(values)
        values[missing] = 0.0
        means = np.empty((filled.size, values.shape[1]))
        for place, month in enumerate(filled):        # np.nanmean of the month's days
            days_of = slice(starts[month], starts[month] + sizes[month])
            with np.errstate(divide="ignore", invalid="ignore"):     # a slot never present
                means[place] = np.sum(values[days_of], axis=0) \
                    / np.sum(~missing[days_of], axis=0, dtype=np.intp)
        # every month's width in one pass (round speed20): _crossings' widths, bit for bit
        widths[filled] = _crossing_widths(means, interval, EDGE_LEVEL)
        off = rg_width - widths
        return float(np.std(off)) if np.isfinite(off).sum() >= MIN_LATITUDE_MONTHS \
            and np.isfinite(off).all() else np.inf

    def scan(sign: float) -> tuple[float, float]:
        """The best latitude of one sign and its swing: 5° steps, then 1° around."""
        coarse = {c: swing(sign * c) for c in np.arange(0.0, 86.0, 5.0)}
        centre = min(coarse, key=coarse.get)
        fine = {c: swing(sign * c) for c in np.arange(max(centre - 4.0, 0.0),
                                                       min(centre + 4.0, 85.0) + 0.5, 1.0)}
        scores = {**coarse, **fine}
        best_abs = min(scores, key=scores.get)
        return sign * float(best_abs), scores[best_abs]

    sign = -1.0 if latitude < 0 else 1.0
    best, best_swing = scan(sign)
    if abs(best) < MIN_LATITUDE_ERROR:
        # pulled to the equator: the other hemisphere's latitudes too, where they lie
        # away from it (near it the sign is not told apart; the configured sign kept on a
        # tie)
        other, other_swing = scan(-sign)
        if abs(other) >= MIN_LATITUDE_ERROR and other_swing < best_swing:
            best, best_swing = other, other_swing
    # A latitude sets the day length symmetrically about solar noon: sunrise and sunset
    # move by the same minutes in opposite directions, the midpoint of the Rg edges stays
    # put (FAO-56, eq. 34: the day length 24 ωs / π from the sunset hour angle ±ωs). An obstruction on one side only
    # (a tree line or building east of the sensor, morning fog) moves one edge, so the
    # midpoint swings by half the width's swing. Called a latitude error only where the
    # midpoint's swing stays below a quarter of the width's (halfway between 0 and 1/2).
    edge_swing = float(np.std(usable["edge_shift_minutes"].to_numpy(dtype=float)))
    if (abs(best - latitude) >= MIN_LATITUDE_ERROR and configured > MIN_DAYLENGTH_SWING
            and configured > 2.0 * best_swing and edge_swing > 0.25 * configured):
        return "cannot_judge", (
            f"latitude not judged: the day lengths of Rg swing {configured:.0f} min against "
            f"the sun at latitude {latitude:g}, but their rise and fall move unequally "
            f"(midpoint swing {edge_swing:.0f} min): a sensor shaded, or fog, on one side "
            "of the day rather than a wrong latitude"), best
    if (abs(best - latitude) >= MIN_LATITUDE_ERROR and configured > MIN_DAYLENGTH_SWING
            and configured > 2.0 * best_swing):
        return "mismatch", (
            f"the day lengths of Rg fit latitude {best:g} (their mismatch with the sun swings "
            f"{best_swing:.0f} min through the year), not the configured {latitude:g} "
            f"({configured:.0f} min over {len(usable)} months): check [site] latitude"
            f"{' and its sign' if best * sign < 0 else ''}, and that [input] path names "
            "this site's file"), best
    return "consistent", _consistent_latitude(latitude, configured), best


def _consistent_latitude(latitude: float, configured: float) -> str:
    """:func:`check_latitude`'s detail where the day lengths fit the configured latitude."""
    return f"day lengths of Rg consistent with latitude {latitude:g} (swing {configured:.0f} min)"


def _unwrapped_shifts(used: pd.DataFrame) -> pd.DataFrame:
    """Monthly shifts (and edge shifts) unwrapped around their circular mean [min].

    A shift is known modulo a day: near ±12 h (a UTC offset of the wrong sign at a
    longitude near ±90°, or a day/night swap) some months read +715 min and others
    −718. Taken as they are, their median and spread describe neither; unwrapped around
    the circular mean of the shifts (common practice for directional data) they are
    one shift of about 12 h again.
    """
    angles = used["shift_minutes"].to_numpy(dtype=float) * (2.0 * np.pi / 1440.0)
    reference = float(np.arctan2(np.mean(np.sin(angles)), np.mean(np.cos(angles))))
    reference *= 1440.0 / (2.0 * np.pi)
    if abs(reference) < 360.0:   # shifts within ±6 h of 0 never wrap: unchanged
        return used

    def unwrap(minutes):
        return (minutes - reference + 720.0) % 1440.0 - 720.0 + reference

    unwrapped = used.copy()
    for column in ("shift_minutes", "edge_shift_minutes"):
        if column in unwrapped.columns:
            unwrapped[column] = unwrap(unwrapped[column].to_numpy(dtype=float))
    return unwrapped


def _daylight_saving(used: pd.DataFrame, latitude: float | None = None):
    """Base shift and later months where the shifts form two groups one hour apart.

    Where `latitude` [degrees north] is given, the later months must lie in its
    hemisphere's daylight-saving season (:data:`_SAVING_MONTHS`): a block of months an
    hour later outside it (January to June in the north: a logger reset between local
    time and UTC at midyear) is a clock changed once, not summer time, and
    ``time_zone = "Area/City"`` would not mend it (layouts25).

    References
    ----------
    Time-zone database (IANA tz) rules for the European Union, United States,
    Australia and New Zealand (m).
    """
    shifts = used["shift_minutes"].to_numpy()
    if len(shifts) < 4:
        return None
    tolerance = 15.0
    candidates = np.unique(np.round(shifts))
    best = None
    for base in candidates:
        for low in (base, base - _DAYLIGHT_SAVING_STEP):
            residual = np.minimum(np.abs(shifts - low),
                                  np.abs(shifts - low - _DAYLIGHT_SAVING_STEP))
            score = np.minimum(residual, 20.0).sum()
            if best is None or score < best[0]:
                best = (score, low)
    _, low = best
    in_low = np.abs(shifts - low) <= tolerance
    in_high = np.abs(shifts - low - _DAYLIGHT_SAVING_STEP) <= tolerance
    if in_low.sum() < 2 or in_high.sum() < 2:
        return None
    high_months = set(used["month"].to_numpy()[in_high].tolist())
    low_months = set(used["month"].to_numpy()[in_low].tolist())
    if high_months & low_months or not _one_block(high_months, low_months):
        return None
    # A clock one hour ahead keeps the day's length; fog or shade on one side of the day
    # that moves the peak by an hour shortens it by about two (see _daylength_mismatch).
    # Called daylight saving only where the later months' day length differs from the
    # others' by less than one hour, halfway between the two.
    if latitude is not None and np.isfinite(latitude):
        season = _SAVING_MONTHS["north" if latitude >= 0 else "south"]
        if not high_months <= season:
            return None
    widths = _daylength_mismatch(used)
    high_width, low_width = widths[in_high], widths[in_low]
    if (np.isfinite(high_width).any() and np.isfinite(low_width).any()
            and abs(np.nanmedian(high_width) - np.nanmedian(low_width))
            >= _DAYLIGHT_SAVING_STEP):
        return None
    base = float(np.median(shifts[in_low]))
    return base, sorted(high_months)


def _shifted_run(used: pd.DataFrame, threshold: float):
    """First and last month and size of a run of 3+ consecutive months shifted alike.

    Where there is none, one or two months off by a clock step (see
    :func:`_short_shifted_run`).

    Only months with a sunrise and a sunset count: under the midnight sun the low sun
    circles the horizon, and a tilted sensor moves both the peak and the edges.

    A run is a period on another clock only where its shift differs from the median of
    the other months by the threshold or more: a clock set otherwise for a period moves
    that period against the rest by its step. A run shifted as much as the rest is the
    whole record's shift, which :func:`check_clock` judges on its own (review25: a
    sensor shaded every afternoon, whose shade in the winter months also covers the
    sunset, was called "from 2021-01 to 2021-04 ... 43 min earlier than the sun ...
    against -44 min in the rest of the record: the logger clock was off in that period",
    and ``run`` refused it).
    """
    used = used[used["sun_sets"].astype(bool)]
    peak = used["shift_minutes"].to_numpy()
    edge = used["edge_shift_minutes"].to_numpy()
    with np.errstate(invalid="ignore"):
        off = ((np.abs(peak) >= threshold) & (np.abs(edge) >= threshold)
               & (np.sign(peak) == np.sign(edge))
               & (np.abs(peak - edge) <= np.maximum(10.0, 0.3 * np.abs(peak))))
        # ... and keep their day length (a clock error does; a morning or evening cut by
        # fog or shade that moves the peak by s shortens it by about 2 s: halfway, s)
        widths = _daylength_mismatch(used)
        reference = widths[~off & np.isfinite(widths)]
        if reference.size:
            change = np.abs(widths - np.median(reference))
            off &= ~(change >= np.abs(peak))
    months = used.index.to_period("M")
    start = 0
    for i in range(1, len(off) + 1):
        consecutive = i < len(off) and (months[i] - months[i - 1]).n == 1
        if i < len(off) and off[i] and off[start] and consecutive \
                and np.sign(peak[i]) == np.sign(peak[start]):
            continue
        if off[start] and i - start >= 3:
            values = peak[start:i]
            size = float(np.median(values))
            rest = np.concatenate([peak[:start], peak[i:]])
            rest = rest[np.isfinite(rest)]
            if np.ptp(values) <= 2.0 * max(10.0, 0.3 * abs(size)) and (
                    rest.size == 0 or abs(size - float(np.median(rest))) >= threshold):
                return used.index[start], used.index[i - 1], size
        start = i
    return _short_shifted_run(used, off, peak, months, threshold)


def _drifting_clock(used: pd.DataFrame, threshold: float):
    """Rate [min per month], first and last month and the shifts where they follow a drift.

    A logger clock that runs fast or slow at a steady rate moves sunrise, solar noon and
    sunset alike by minutes that grow in proportion to the time since it was last set:
    the monthly shifts of the peak and of the rise and fall then lie on one straight line
    in time, and the day length is kept. A tilted or shaded sensor moves the peak with the
    sun's declination, a course that returns within the year, and changes the day length;
    clouds scatter a month by a few minutes. Named where at least
    :data:`DRIFT_MIN_MONTHS` months with a sunrise and a sunset spanning
    :data:`DRIFT_MIN_SPAN_MONTHS` months or more give a least-squares line of the peak
    shifts that changes by the threshold or more over the record, the peak's and the
    edges' robust scatter about their lines stay within :data:`DRIFT_MAX_SCATTER`, the
    edges' line changes by the peak's within a quarter, and the day-length mismatch
    changes by less than half of it (a clock keeps the day's length). None otherwise.

    Parameters
    ----------
    used : pandas.DataFrame
        The usable months of :func:`monthly_shifts`, unwrapped (:func:`_unwrapped_shifts`):
        ``shift_minutes``, ``edge_shift_minutes`` [min], ``sun_sets`` and the day lengths
        :func:`_daylength_mismatch` reads, indexed by month start.
    threshold : float
        Smallest change over the record named [min] (:func:`shift_threshold_minutes`).

    Returns
    -------
    tuple or None
        ``(rate, first, last, start, end)``: the peak's rate [min per month, positive:
        Rg comes later against the sun month by month], the first and last month judged
        (pandas.Timestamp) and the line's shift in them [min]; None where no drift is seen.

    References
    ----------
    Iqbal, M. (1983). An Introduction to Solar Radiation. Academic Press, ch. 1 (solar
    noon and day length from the stamps' clock) (m).
    """
    used = used[used["sun_sets"].astype(bool)]
    peak = used["shift_minutes"].to_numpy(dtype=float)
    edge = used["edge_shift_minutes"].to_numpy(dtype=float)
    width = _daylength_mismatch(used)
    ok = np.isfinite(peak) & np.isfinite(edge)
    if ok.sum() < DRIFT_MIN_MONTHS:
        return None
    periods = used.index.to_period("M")
    months = np.array([(p - periods[0]).n for p in periods], dtype=float)
    months, peak, edge, width = months[ok], peak[ok], edge[ok], width[ok]
    span = months[-1] - months[0]
    if span < DRIFT_MIN_SPAN_MONTHS:
        return None

    def line(values):
        slope, intercept = np.polyfit(months, values, 1)
        residual = values - (slope * months + intercept)
        return slope, scaled_mad(residual, float(np.median(residual)))

    rate, scatter = line(peak)
    edge_rate, edge_scatter = line(edge)
    change = rate * span
    if (abs(change) < threshold or scatter > DRIFT_MAX_SCATTER
            or edge_scatter > DRIFT_MAX_SCATTER
            or abs(edge_rate - rate) > 0.25 * abs(rate)):
        return None
    finite = np.isfinite(width)
    if finite.sum() >= DRIFT_MIN_MONTHS:
        width_rate = np.polyfit(months[finite], width[finite], 1)[0]
        if abs(width_rate * span) >= 0.5 * abs(change):
            return None
    first, last = used.index[ok][0], used.index[ok][-1]
    offset = float(np.median(peak - rate * months))
    return (float(rate), first, last, float(rate * months[0] + offset),
            float(rate * months[-1] + offset))


def _short_shifted_run(used: pd.DataFrame, off: np.ndarray, peak: np.ndarray, months,
                       threshold: float):
    """First and last month and size of one or two months off by a clock step.

    A logger clock set to another time for one monthly file (local civil time, UTC, a
    neighbouring zone) moves that month's sunrise, noon and sunset alike by the step, in
    the sizes clock settings come in: whole or half hours (time zones; Iqbal 1983,
    ch. 1 (m)) or one record (a stamp convention). Clouds move a month's estimate by a
    few minutes only, and a tilted or shaded sensor moves every month alike. Named where
    at most two months (consecutive where two) are off (peak and edges agreeing, day
    length kept: see :func:`_shifted_run`), they lie within :data:`STEP_TOLERANCE`
    minutes of a multiple of 30 min and differ from the median of the other months by
    more than :data:`SHORT_RUN_ROBUST_SIGMAS` scaled median absolute deviations of
    those months, whose own median stays within half the threshold (a clock on time).
    """
    where = np.flatnonzero(off)
    if where.size == 0 or where.size > 2 or len(peak) - where.size < MIN_LATITUDE_MONTHS:
        return None
    if where.size == 2 and (months[where[1]] - months[where[0]]).n != 1:
        return None
    values = peak[where]
    if where.size == 2 and np.sign(values[0]) != np.sign(values[1]):
        return None
    rest = np.delete(peak, where)
    rest = rest[np.isfinite(rest)]
    centre = float(np.median(rest))
    scatter = scaled_mad(rest, centre)
    if abs(centre) >= threshold / 2.0:
        return None
    size = float(np.median(values))
    step = 30.0 * round(size / 30.0)
    if (step == 0.0 or np.any(np.abs(values - step) > STEP_TOLERANCE)
            or np.any(np.abs(values - centre) < max(threshold, SHORT_RUN_ROBUST_SIGMAS
                                                    * scatter))):
        return None
    return used.index[where[0]], used.index[where[-1]], size


def _one_block(inside: set, outside: set) -> bool:
    """Whether some cyclic run of months of the year holds all of `inside`, none of `outside`."""
    for start in range(1, 13):
        for length in range(1, 12):
            run = {(start - 1 + k) % 12 + 1 for k in range(length)}
            if inside <= run and not run & outside:
                return True
    return False


def _zone_fix(hours: float, time_zone: str, utc_offset: float) -> str:
    """What mends a clock `hours` off where the stamps were read in ``[input] time_zone``.

    The reader converts the stamps from the zone to the site's standard time, so the
    shift is the zone's error, whatever utc_offset says (it sets the output's clock
    only): the stamps are in the zone's standard offset plus the shift.
    """
    from .time_zones import zone_standard_hours

    zone_hours = zone_standard_hours(time_zone)
    stamps = zone_hours + hours
    stamps += 24.0 if stamps < -12.0 else -24.0 if stamps > 14.0 else 0.0   # known modulo a day
    read = f"not UTC{zone_hours:+g} h as [input] time_zone = \"{time_zone}\" reads them"
    if abs(stamps - utc_offset) < 1e-9:
        return (f"remove [input] time_zone (the stamps are in the site's standard time "
                f"UTC{utc_offset:+g} h, {read}; with a zone, utc_offset sets only the "
                "output's clock and cannot move Rg against the sun)")
    if stamps == 0.0:
        return f"[input] time_zone = \"UTC\" (the stamps are in UTC, {read})"
    return (f"the stamps' zone (they are in UTC{stamps:+g} h, {read}; convert them to the "
            f"site's standard time UTC{utc_offset:+g} h in a copy of the file)")


def _fix(shift: float, utc_offset: float, interval_minutes: float, time_marks: str | None,
         shift_applied: float, longitude: float, latitude: float | None = None,
         time_zone: str | None = None) -> tuple[str, float | None]:
    """What setting removes a shift of `shift` minutes, in words, and the utc_offset
    (None where `time_zone`, the reader's ``[input] time_zone``, converted the stamps:
    utc_offset then cannot move them against the sun, round mistakes48)."""
    hours = shift / 60.0
    # the sun crosses the meridian 4 min later per degree west (Earth turns 360° per day);
    # a longitude of the wrong sign moves solar noon by 8 min per degree
    flipped = (8.0 * longitude + 720.0) % 1440.0 - 720.0
    flip = None
    if abs(longitude) >= 2.0 and abs(flipped - shift) <= 10.0:
        flip = (f"[site] longitude = {-longitude:g} (the configured {longitude:g} has the "
                "wrong sign)")
    offset = utc_offset + round(hours * 4.0) / 4.0          # offsets come in quarter hours
    if offset > 14.0:          # a shift is known modulo a day: zones run from -12 to +14 h
        offset -= 24.0
    elif offset < -12.0:
        offset += 24.0
    fixes = []
    residual_offset = abs((shift - (offset - utc_offset) * 60.0 + 720.0) % 1440.0 - 720.0)
    suggested = None
    whole_hours = abs(shift - round(hours) * 60.0) <= 15.0
    # only offsets in use are suggested for a shift that is not whole hours
    used_offset = float(offset).is_integer() or offset in FRACTIONAL_UTC_OFFSETS
    if (time_zone is not None and abs(offset - utc_offset) >= 0.5 and residual_offset <= 15.0
            and used_offset):
        fixes.append(_zone_fix(offset - utc_offset, time_zone, utc_offset))
    elif abs(offset - utc_offset) >= 0.5 and residual_offset <= 15.0 and used_offset:
        fixes.append(f"[site] utc_offset = {offset:g} (stamps in UTC{offset:+g} h rather than "
                     f"UTC{utc_offset:+g} h)")
        suggested = float(offset)
        if offset == 0.0:
            # a logger kept on UTC: the zone setting reads it and keeps the output in the
            # site's local standard time, where utc_offset = 0 would move the output to UTC
            # a frame has no [input]: its index given the zone is converted (review36)
            frame = ("; a frame given to fluxpart.process: frame.index.tz_localize(\"UTC\"), "
                     "an index in UTC is converted likewise" if time_marks is None else "")
            fixes.append(f"[input] time_zone = \"UTC\" (a logger kept on UTC; the output "
                         f"stays in the site's UTC{utc_offset:+g} h{frame})")
    if time_marks is not None:
        shifts = {"start": 0.0, "middle": interval_minutes / 2.0, "end": float(interval_minutes)}
        for marks, applied in shifts.items():
            if marks != time_marks and abs(shift_applied + shift - applied) <= 10.0:
                fixes.append(f"[input] time_marks = \"{marks}\" (the stamps mark interval "
                             f"{marks}s, not {time_marks}s)" if marks != "middle" else
                             "[input] time_marks = \"middle\" (the stamps mark interval "
                             f"middles, not {time_marks}s)")
    elif abs(abs(shift) - interval_minutes) <= 10.0 or abs(abs(shift)
                                                           - interval_minutes / 2) <= 5.0:
        # no reader record: a frame given to fluxpart.process, whose index the user sets
        fixes.append("the stamp convention (interval start, middle or end: [input] time_marks; "
                     "a frame given to fluxpart.process needs an index of interval starts)")
    if len(fixes) > 1 and not whole_hours:
        fixes = fixes[1:] + fixes[:1]                        # a stamp convention first
    zone_gap = longitude / 15.0 - utc_offset     # 15° per hour from the zone's meridian
    if (not whole_hours and abs(shift) >= 8.0) or abs(zone_gap) > 2.5:
        fixes.append(f"[site] longitude (Rg is {abs(shift):.0f} min off the sun, "
                     f"{abs(shift) / 4.0:.1f}° of longitude at 4 min per degree: check the "
                     "tower's longitude, degrees east)")
    # latitude and longitude swapped: the sun is timed at the latitude's value taken as
    # a longitude, 4 min per degree from the true one
    if (latitude is not None and abs(longitude) <= 90.0 and abs(longitude - latitude) >= 2.5
            and abs(4.0 * (longitude - latitude) - shift) <= 10.0):
        fixes.insert(0, f"[site] latitude = {longitude:g} and longitude = {latitude:g} (the "
                        "configured values look swapped)")
    if latitude == 0.0 and longitude == 0.0:
        # 0, 0 lies in the open Atlantic: a placeholder left in the site config
        fixes.insert(0, "[site] latitude and longitude (0, 0 is a placeholder, in the open "
                        "ocean: give the tower's coordinates)")
    if flip is not None:
        # the same shift is also a stamp convention or a clock setting where one record or
        # whole hours lie near 8 min per degree (7.5° at 60 min, 3.75° at 30 min): name
        # those first, the sign last, since the data cannot tell them apart and a
        # longitude flipped to match a stamp error passes the check (review39)
        others = [fix for fix in fixes if not fix.startswith("[site] longitude (")]
        if not others:
            return flip, None
        return " or ".join([*others, flip]), suggested
    if not fixes:
        fixes.append(f"the logger clock, or [site] utc_offset (about {offset:g} h) or "
                     "[site] longitude")
    return " or ".join(fixes), suggested


def check_clock(index, rg, latitude, longitude, utc_offset, interval_minutes, *,
                time_marks: str | None = None, shift_applied_minutes: float = 0.0,
                time_zone: str | None = None, potential=None) -> ClockVerdict:
    """Judge the record's clock and the site's latitude sign from measured Rg.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts, local standard time, regular.
    rg : array_like
        Measured global radiation [W m-2]; NaN where missing.
    latitude, longitude : float
        Site position [degrees north, east].
    utc_offset : float
        Configured offset of local standard time from UTC [hours].
    interval_minutes : float
        Record interval [min].
    time_marks : {"start", "middle", "end"}, optional
        How the file's stamps were declared, where the record came from a file; lets
        the message name the stamp convention that would remove the shift.
    shift_applied_minutes : float, optional
        Minutes the reader subtracted from the file's stamps (0, half or one
        interval for ``time_marks`` start, middle, end).
    time_zone : str, optional
        The ``[input] time_zone`` the reader converted the stamps from: a whole-hour
        shift is then named as that zone's, not as utc_offset's.
    potential : array_like, optional
        The record's potential radiation at the configured settings [W m-2], where the
        caller has it (the run's solar geometry): not computed again where it is the
        record's own, else computed afresh (as :func:`monthly_shifts`).

    Returns
    -------
    ClockVerdict
        The status, the median shift [min] and its spread, the problems with the
        setting to change, and notes where the check cannot judge.

    Notes
    -----
    See the module description for the method. A positive shift means measured Rg
    comes later than the sun at the configured settings; the stamps are then in a
    time zone ``shift / 60`` hours east of the configured one.

    References
    ----------
    Michalsky, J. J. (1988). Solar Energy 40(3):227–235.
    """
    interval = float(interval_minutes)
    months = monthly_shifts(index, rg, latitude, longitude, utc_offset, interval,
                            potential=potential)
    used = months[months["used"]]
    problems, notes = [], []
    hemisphere, hemisphere_detail = check_hemisphere(index, rg, latitude, longitude, utc_offset,
                                                     interval, months)
    if hemisphere == "mismatch":
        problems.append(f"site geometry: {hemisphere_detail}")
    elif hemisphere == "cannot_judge":
        notes.append(hemisphere_detail)
    if len(used) < MIN_WINDOWS:
        reasons = months.loc[~months["used"], "reason"].value_counts()
        detail = "; ".join(f"{count} month(s): {why}" for why, count in reasons.items())
        notes.append(f"clock not judged: {len(used)} usable month(s) of Rg ({MIN_WINDOWS} "
                     f"needed){'; ' + detail if detail else ''}")
        status = "hemisphere" if hemisphere == "mismatch" else "cannot_judge"
        return ClockVerdict(status, np.nan, np.nan, len(used), None, tuple(problems),
                            tuple(notes), hemisphere, months)
    used = _unwrapped_shifts(used)
    shifts = used["shift_minutes"].to_numpy()
    median = float(np.median(shifts))
    spread = scaled_mad(shifts, median)
    threshold = shift_threshold_minutes(interval)
    suggested = None
    tilt_note = None    # a peak shift its rise and fall deny; dropped where a drift explains it
    status = "consistent"
    saving = _daylight_saving(used, latitude)
    if saving is not None:
        base, later = saving
        status = "daylight_saving"
        names = ", ".join(pd.Timestamp(2001, m, 1).strftime("%b") for m in later)
        text = (f"clock: Rg comes about 60 min later against the sun in {names} than in the "
                f"other months: the stamps follow daylight-saving civil time; give "
                f"[input] time_zone = \"Area/City\" (converted to local standard time) or "
                f"convert the stamps to local standard time")
        if abs(base) >= threshold:
            fix, suggested = _fix(base, utc_offset, interval, time_marks, shift_applied_minutes,
                                  longitude, latitude, time_zone)
            text += f"; outside daylight saving Rg is {base:+.0f} min off: set {fix}"
        problems.append(text)
        median = base
    elif abs(median) >= threshold:
        edges = used["edge_shift_minutes"].dropna().to_numpy()
        edge_median = float(np.median(edges)) if edges.size else np.nan
        agree = np.mean((np.sign(shifts) == np.sign(median))
                        & (np.abs(shifts) >= threshold / 2.0))
        tolerance = max(10.0, 0.3 * abs(median))
        edge_spread = scaled_mad(edges, edge_median) if edges.size else np.nan
        if (agree >= 2.0 / 3.0 and abs(edge_median) >= threshold
                and abs(edge_median - median) <= tolerance
                and spread <= tolerance and edge_spread <= tolerance):
            status = "shifted"
            fix, suggested = _fix(median, utc_offset, interval, time_marks,
                                  shift_applied_minutes, longitude, latitude, time_zone)
            direction = "later" if median > 0 else "earlier"
            problems.append(
                f"clock: measured Rg comes {abs(median):.0f} min {direction} than the sun at "
                f"[site] utc_offset = {utc_offset:g}, longitude {longitude:g} (spread "
                f"{spread:.0f} min over {len(used)} months; the rise and fall of Rg agree: "
                f"{edge_median:+.0f} min); likely fix: {fix}")
        else:
            tilt_note = (
                f"clock: Rg peaks {median:+.0f} min (spread {spread:.0f} min) against the sun "
                f"but its rise and fall say {edge_median:+.0f} min (spread {edge_spread:.0f} "
                f"min) and {100 * agree:.0f} % of {len(used)} months agree: a tilted or partly "
                "shaded Rg sensor rather than a clock error; not called a clock problem")
            notes.append(tilt_note)
    if status == "consistent":
        drift = _drifting_clock(used, threshold)
        if drift is not None:
            rate, first, last, start, end = drift
            notes = [n for n in notes if n is not tilt_note]
            status = "shifted"
            direction = "later" if rate > 0 else "earlier"
            problems.append(
                f"clock: measured Rg comes {abs(rate):.1f} min {direction} against the sun "
                f"each month, {start:+.0f} min in {first:%Y-%m} to {end:+.0f} min in "
                f"{last:%Y-%m} (peak and rise and fall agree, the day length kept): the logger "
                "clock drifts; correct the stamps by the drift (or set the logger clock "
                "against a time source and mend the record)")
    if status == "consistent":
        run = _shifted_run(used, threshold)
        if run is not None:
            first, last, size = run
            rest = used["shift_minutes"][(used.index < first) | (used.index > last)]
            rest_text = (f"against {float(np.median(rest)):+.0f} min in the rest of the record"
                         if len(rest) else "the whole record")
            notes = [n for n in notes if n is not tilt_note]
            status = "shifted"
            direction = "later" if size > 0 else "earlier"
            period = (f"in {first:%Y-%m}" if first == last
                      else f"from {first:%Y-%m} to {last:%Y-%m}")
            problems.append(
                f"clock: {period} measured Rg comes {abs(size):.0f} "
                f"min {direction} than the sun (peak and rise and fall agree), {rest_text}: the "
                "logger clock was off in that period; correct those stamps")
    if status == "consistent" and hemisphere == "mismatch":
        status = "hemisphere"
    if hemisphere != "mismatch":
        verdict, detail, best_latitude = check_latitude(index, rg, latitude, longitude, utc_offset,
                                                        interval, months, verdict_only=True)
        if verdict == "mismatch":
            problems.append(f"site geometry: {detail}")
            status = "latitude" if status == "consistent" else status
        elif verdict == "cannot_judge" and np.isfinite(best_latitude):
            notes.append(detail)
    return ClockVerdict(status, median, spread, len(used), suggested, tuple(problems),
                        tuple(notes), hemisphere, months)
