"""Global radiation too dim for any sky over two months or more of a record (round mistakes29).

The reader refuses a record whose brightest global radiation with the sun high reaches
less than half the potential radiation (``unit_checks._too_dark_message``: PAR in W m-2
mapped as rg, a shaded or soiled sensor), since clear skies pass about 0.75 of it and
60 days of any climate hold clear hours. That test sees the whole record only: a
pyranometer replaced or re-wired from some month on (the reflected-radiation channel of a
four-component radiometer taken for the incoming one, a PAR channel mapped after a logger
program changed, a new sensor's sensitivity left at the old one's) leaves the record's
brightest 1 % in its other months, and passes. Its dim records with the sun up count as
night for the night mask (Rg below ``night_rg_threshold``) at dawn and dusk, and the light
responses see a light several times too low: on the invented grassland example the
reflected radiation (0.22 of the incoming) from July moved the nighttime GPP by -34, the
Reco by -36 and the daytime GPP by -29 g C m-2, without a word.

Here the same bound is applied to every run of whole calendar months that holds the
reader's 60 days (here days with Rg read at high sun): where such a run is that dim while the rest of the record
reads as a sky does, the months are named (a warning; the values are kept).

Months without a clear half-hour do occur (a monsoon's core, a coastal winter's stratus):
where the air temperature's daily range shows days as overcast as the rest's overcast days
of the same range are (Bristow and Campbell 1984 (m)), the months are a cloudy season and
not named (round falsealarm56). Each run of consecutive dim months is judged so on its own,
against the months outside every run: a monsoon's core and a sensor fault later in the same
record are told apart, and only the fault's months are named (round rgdim57).

References
----------
Bristow, K. L., & Campbell, G. S. (1984). On the relationship between incoming solar
radiation and daily maximum and minimum temperature. Agricultural and Forest Meteorology
31(2):159-166. doi:10.1016/0168-1923(84)90017-0 (m)

Kasten, F., & Czeplak, G. (1980). Solar and terrestrial radiation dependent on the amount
and type of cloud. Solar Energy 24(2):177-189. doi:10.1016/0038-092X(80)90391-6 (m)

Gueymard, C. A. (2012). Clear-sky irradiance predictions for solar resource mapping and
large-scale applications. Solar Energy 86(8):2145-2169. doi:10.1016/j.solener.2011.11.011 (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .measured_months import month_runs_text
from .unit_checks import _MIN_ACTIVE_RECORDS, _PPFD_CLEAR_MIN, _TOO_DARK_MIN_DAYS

__all__ = ["HIGH_SUN_POTENTIAL", "SENSOR_RATIO", "dim_rg_months", "sky_ratio"]

#: Potential radiation (interval mean) above which the sun counts as high [W m-2]: the
#: reader's whole-record test's (``unit_checks._too_dark_message``), about 26 degrees of
#: elevation; there a clear sky passes about 0.75 of it (common practice).
HIGH_SUN_POTENTIAL = 600.0
#: Rg at the 99th percentile of the records with the sun down above which the radiation
#: at night is the clock's concern, not the sensor's [W m-2] (the reader's test's bound).
_NIGHT_BRIGHT = 50.0
#: The dim months' daily transmittance over the one the rest of the record shows on days of
#: the same temperature range, below which the sensor, not the sky, is dim (the reflected
#: channel reads about 0.22 of the incoming radiation, PAR in W m-2 about 0.46, a sensor the
#: whole-record bound would catch under a clear sky 0.67 or less; an overcast season whose
#: small daily range the rest's cloudy days share, about 1). Our choice between them.
SENSOR_RATIO = 0.75
#: Days of each part needed to compare them, and the nearest days in temperature range of
#: the rest that predict a dim day's transmittance. Our choice.
_MIN_SKY_DAYS = 20
_NEAREST_DAYS = 15


def sky_ratio(rg, potential, tair, day, inside, rest=None) -> float:
    """The dim records' daily transmittance over that of the rest's days of like range.

    Parameters
    ----------
    rg, potential, tair : numpy.ndarray
        Global and potential radiation [W m-2] and air temperature [degC] of each record,
        NaN where missing.
    day : numpy.ndarray
        The calendar day (``datetime64[D]``) of each record.
    inside : numpy.ndarray of bool
        The records of the dim months.
    rest : numpy.ndarray of bool, optional
        The records to compare them with (default: all others); the months outside every
        dim run, where the runs are judged one by one.

    Returns
    -------
    float
        The median over the dim months' days of each day's transmittance (its Rg over its
        potential radiation, summed over the records with the sun up) divided by the
        median transmittance of the :data:`_NEAREST_DAYS` days of the rest of the record
        whose daily air temperature range lies nearest its own; NaN where either part
        holds fewer than :data:`_MIN_SKY_DAYS` days with Rg read over 80 % of the sun's
        records and tair over 80 % of the day's.

    Notes
    -----
    A cloud cover that dims the global radiation also narrows the day's temperature range:
    the daily transmittance is a rising function of the range (Bristow and Campbell 1984
    (m)), so an overcast season's days resemble the rest's overcast days in both, and the
    ratio lies near 1. A sensor reading a share of the incoming radiation leaves the
    thermometer's range as the sky makes it and scales only the transmittance: the ratio
    is that share (0.22 for the reflected channel, 0.46 for PAR in W m-2).

    References
    ----------
    Bristow, K. L., & Campbell, G. S. (1984). On the relationship between incoming solar
    radiation and daily maximum and minimum temperature. Agricultural and Forest
    Meteorology 31(2):159-166. doi:10.1016/0168-1923(84)90017-0 (m)
    """
    labels, where = np.unique(day, return_inverse=True)
    count = np.bincount(where, minlength=labels.size)
    sun = potential > 0.0
    lit = sun & np.isfinite(rg)
    sun_n = np.bincount(where, sun, labels.size)
    lit_n = np.bincount(where, lit, labels.size)
    rg_sum = np.bincount(where, np.where(lit, rg, 0.0), labels.size)
    pot_sum = np.bincount(where, np.where(lit, potential, 0.0), labels.size)
    tair_read = np.isfinite(tair)
    frame = pd.DataFrame({"t": np.where(tair_read, tair, np.nan), "d": where})
    groups = frame.groupby("d")["t"]
    span = (groups.max() - groups.min()).reindex(range(labels.size)).to_numpy()
    t_n = np.bincount(where, tair_read, labels.size)
    part = np.bincount(where, inside, labels.size) > 0.5 * count
    other = ~part if rest is None else np.bincount(where, rest, labels.size) > 0.5 * count
    usable = (lit_n >= 0.8 * np.maximum(sun_n, 1)) & (sun_n > 0) & (t_n >= 0.8 * count) \
        & (pot_sum > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = rg_sum / pot_sum
    dim_days, rest_days = usable & part, usable & other
    if dim_days.sum() < _MIN_SKY_DAYS or rest_days.sum() < _MIN_SKY_DAYS:
        return float("nan")
    distance = np.abs(span[dim_days][:, None] - span[rest_days][None, :])
    k = min(_NEAREST_DAYS, int(rest_days.sum()))
    nearest = np.argpartition(distance, k - 1, axis=1)[:, :k]
    predicted = np.median(tau[rest_days][nearest], axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return float(np.median(tau[dim_days] / predicted))


def _dim_runs(labels: np.ndarray, dim: np.ndarray) -> list[np.ndarray]:
    """The indices of each run of consecutive calendar months flagged in ``dim``."""
    flagged = np.flatnonzero(dim)
    if not flagged.size:
        return []
    steps = np.diff(labels[flagged].astype("int64"))
    breaks = np.flatnonzero(steps != 1) + 1
    return np.split(flagged, breaks)


def _clear_quantile(ratio: np.ndarray) -> float:
    """The 99th percentile of Rg over potential radiation (NaN where empty)."""
    return float(np.percentile(ratio, 99)) if ratio.size else float("nan")


def dim_rg_months(rg, potential, stamps, columns=None, tair=None) -> str | None:
    """A message where Rg reads too dim for any sky in a run of months, or None.

    Parameters
    ----------
    rg : array_like
        Global radiation of each record [W m-2], NaN where missing.
    potential : array_like
        Potential (top-of-atmosphere) radiation of the same records, interval means
        [W m-2].
    stamps : pandas.DatetimeIndex
        Interval starts of the records (local standard time).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.
    tair : array_like, optional
        Air temperature of the same records [degC]: where given, a run of consecutive dim
        months whose days are as bright as the days of the same temperature range outside
        every run (:func:`sky_ratio` at :data:`SENSOR_RATIO` or above) is an overcast
        season, not named (round falsealarm56); each run is judged on its own (round
        rgdim57).

    Returns
    -------
    str or None
        The warning text, naming the first and last month of the dim runs, their
        brightest 1 % as a fraction of the potential radiation and the rest's; None where
        no run of whole months holding :data:`unit_checks._TOO_DARK_MIN_DAYS` days
        with present Rg at high sun and :data:`unit_checks._MIN_ACTIVE_RECORDS` records with the sun high
        (potential radiation above :data:`HIGH_SUN_POTENTIAL`) has its 99th percentile of
        Rg / potential below :data:`unit_checks._PPFD_CLEAR_MIN` (0.5), or where the
        record outside such runs does not reach 0.5 either (the reader's whole-record
        refusal is then the one to speak), or where the dim run is bright at night (a
        clock hours off, the clock check's concern).

    Notes
    -----
    A clear sky passes about 0.75 of the potential radiation at high sun (broadband
    transmittance of a clean atmosphere, Gueymard 2012 (m); 0.78 to 0.81 on the
    generated site-years), broken cloud briefly more, and any 60 days hold clear hours
    (a monsoon's active spells last one to three weeks and alternate with breaks, the
    reader's argument for its refusal, kept here). So in 60 days of a working
    pyranometer the brightest 1 % of the high-sun records lie near or above 0.75 of the
    potential radiation; below 0.5 the sensor does not see the sky's global radiation.
    Each run starts at a month's first record and takes whole months until it holds
    60 days on which Rg was read with the sun high (the days of sky the argument needs;
    the months of a high-latitude winter add none); every such run is tested, so a change from some month on and
    a change for a season only are both found, and a run is never shorter than the
    record the reader would refuse. Under eight oktas the global radiation is about 0.25
    of the clear sky's (Kasten & Czeplak 1980 (m)), so a dim run is not a rainy spell.
    Yet some climates hold months without a clear half-hour: a monsoon's core, the
    stratus of a coastal winter, an equatorial dry season under cloud (round
    falsealarm56). There the air temperature's daily range is as narrow as on the rest's
    overcast days, and :func:`sky_ratio` tells the sky from the sensor.

    References
    ----------
    Bristow, K. L., & Campbell, G. S. (1984). On the relationship between incoming solar
    radiation and daily maximum and minimum temperature. Agricultural and Forest
    Meteorology 31(2):159-166. doi:10.1016/0168-1923(84)90017-0 (m)

    Kasten, F., & Czeplak, G. (1980). Solar and terrestrial radiation dependent on the
    amount and type of cloud. Solar Energy 24(2):177-189.
    doi:10.1016/0038-092X(80)90391-6 (m)

    Gueymard, C. A. (2012). Clear-sky irradiance predictions for solar resource mapping
    and large-scale applications. Solar Energy 86(8):2145-2169.
    doi:10.1016/j.solener.2011.11.011 (m)
    """
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    if stamps is None or rg.size == 0 or rg.shape != potential.shape or len(stamps) != rg.size:
        return None
    present = np.isfinite(rg)
    with np.errstate(invalid="ignore", divide="ignore"):
        high = present & (potential > HIGH_SUN_POTENTIAL)
        ratio = np.where(high, rg / np.where(high, potential, 1.0), np.nan)
    dark = present & (potential <= 0.0)
    months = np.asarray(pd.DatetimeIndex(stamps).values, dtype="datetime64[M]")
    order = np.argsort(months, kind="stable")
    labels, starts = np.unique(months[order], return_index=True)
    rows = np.split(order, starts[1:])
    # days with the sun high and Rg present, per month: the 60 days of sky the argument
    # needs are days the sensor saw with the sun high, not records of a month whose high
    # sun lasts a week (a run of October and November at 56° N holds 49 such records on
    # ten days, their brightest 1 % 0.51 of the potential on a generated site-year)
    day = np.asarray(pd.DatetimeIndex(stamps).values, dtype="datetime64[D]")
    need = _TOO_DARK_MIN_DAYS
    counts = np.array([np.unique(day[r[high[r]]]).size for r in rows])
    dim = np.zeros(labels.size, dtype=bool)
    for first in range(labels.size):
        total, last = 0, first
        while last < labels.size:
            total += counts[last]
            if total >= need:
                break
            last += 1
        if total < need:
            break
        run = np.concatenate(rows[first:last + 1])
        sunlit = run[high[run]]
        if sunlit.size < _MIN_ACTIVE_RECORDS:
            continue
        clear = _clear_quantile(ratio[sunlit])
        if not 0.0 < clear < _PPFD_CLEAR_MIN:
            continue
        night = run[dark[run]]
        if night.size >= _MIN_ACTIVE_RECORDS and np.percentile(rg[night], 99) > _NIGHT_BRIGHT:
            continue
        dim[first:last + 1] = True
    if not dim.any():
        return None
    inside = np.concatenate([rows[i] for i in np.flatnonzero(dim)])
    outside = np.ones(rg.size, dtype=bool)
    outside[inside] = False
    rest = outside & high
    if int(rest.sum()) < _MIN_ACTIVE_RECORDS:
        return None
    rest_clear = _clear_quantile(ratio[rest])
    if not rest_clear >= _PPFD_CLEAR_MIN:
        return None
    if tair is not None:
        # each run of consecutive dim months is judged by its own days against the months
        # outside every run: a monsoon's core and a later sensor fault are told apart
        # (round rgdim57)
        tair = np.asarray(tair, dtype=float)
        for run in _dim_runs(labels, dim):
            own = np.zeros(rg.size, dtype=bool)
            own[np.concatenate([rows[i] for i in run])] = True
            with np.errstate(invalid="ignore"):
                sky = sky_ratio(rg, potential, tair, day, own, outside)
            if sky >= SENSOR_RATIO:
                dim[run] = False
        if not dim.any():
            return None
        inside = np.concatenate([rows[i] for i in np.flatnonzero(dim)])
    dim_clear = _clear_quantile(ratio[inside[high[inside]]])
    named = pd.PeriodIndex(labels[dim], freq="M")
    # consecutive dim months as runs ("2021-03 to 2021-04, 2021-08"), in record order
    span = month_runs_text(list(named))
    column = (columns or {}).get("rg", "rg")
    return (f"rg (column {column!r}) from {span} ({len(named)} month(s); months without "
            "the sun high are not judged): with the sun high "
            f"its brightest 1 % reach only {dim_clear:.2f} times the potential radiation, "
            f"against {rest_clear:.2f} in the rest of the record; clear skies pass about "
            f"0.75 of it and {_TOO_DARK_MIN_DAYS} days of any climate hold clear hours, so "
            "in those months the column does not read the incoming global radiation (a "
            "sensor replaced or re-wired, the reflected or PAR channel mapped, a new "
            "sensor's calibration factor left at the old one's, a cover): their dim "
            "records with the sun up count as night and the light responses see too "
            "little light; check those months and correct them in a copy of the file")
