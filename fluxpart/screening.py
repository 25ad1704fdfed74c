"""Data screening: plausible ranges, the site's own flag, spikes, radiation, low u*.

Each check is a pure function returning a boolean array named for its
condition; :func:`screen` applies them in a fixed, documented order and returns
a frozen :class:`Screening` with the flags, the first reason that rejected each
NEE record, the screened series, per-reason counts and the thresholds used
(for the manifest).

Reason codes (column ``reason`` of :attr:`Screening.reason`, ``int8``), the
first condition in the order of application that rejected the NEE record:

====  ===================  ===========================================================
code  name                 meaning
====  ===================  ===========================================================
0     ``kept``             NEE present and accepted
1     ``missing``          NEE absent (NaN) in the input
2     ``out_of_range``     NEE outside its plausible range in ``variables.VARIABLES``
3     ``site_flag``        the site's own quality flag ``nee_flag`` is non-zero
4     ``spike``            double-differenced NEE outlier (Papale et al. 2006)
5     ``low_ustar``        night record with u* below the threshold, or u* missing
6     ``morning_release``  day record within 3 h after a calm night, in a year whose
                           mornings show the release of stored CO2
                           (:func:`fluxpart.storage_check.release_mornings`)
====  ===================  ===========================================================
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ._validate import as_bool, datetime_index
from .errors import (
    ConfigError,
    FluxpartError,
    LengthMismatchError,
    MissingColumnError,
)
from .schema import REASON_LABELS
from .variables import VARIABLES

__all__ = [
    "REASON_CODES",
    "Screening",
    "despike",
    "low_ustar",
    "range_flags",
    "rg_above_potential",
    "screen",
    "site_flag",
]

#: Reason code -> reason name, in the order the checks are applied: 0 kept, 1 missing,
#: 2 out_of_range, 3 site_flag, 4 spike, 5 low_ustar. The names are the labels of the
#: string-coded ``rejection_reason`` column of a result (:data:`fluxpart.schema.REASON_LABELS`).
REASON_CODES: dict[int, str] = dict(enumerate(REASON_LABELS))

# Median absolute deviation of a normal sample divided by this estimates its
# standard deviation: the 0.75 quantile of the standard normal distribution,
# 0.674490 (Papale et al. 2006 write 0.6745). Checked against
# scipy.stats.norm.ppf(0.75) in tests/test_screening.py.
_MAD_NORMAL_QUANTILE = 0.6745

# Extra passes of despike's refinement that test the records next to spikes just flagged:
# a burst of n spike records is flagged in at most n passes. Our choice: 4 extra passes
# reach bursts of 5 records (2.5 h of half-hours), longer runs being outages or drifts
# that the range checks and the site flag are for.
_BURST_PASSES = 4

# Variables whose plausible range is checked (the site flag has no range).
_RANGE_CHECKED = tuple(name for name, v in VARIABLES.items()
                       if np.isfinite(v.minimum) or np.isfinite(v.maximum))


def range_flags(frame: pd.DataFrame) -> pd.DataFrame:
    """Flag values outside the physically plausible range of their variable.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical columns (``nee`` [µmol m-2 s-1], ``rg`` [W m-2], ``tair`` [°C],
        ``vpd`` [hPa], ``ustar`` [m s-1], ``tsoil`` [°C], ``rh`` [%]); other
        columns are ignored.

    Returns
    -------
    pandas.DataFrame
        Same index as `frame`, one boolean column ``<name>_out_of_range`` per
        canonical variable present, True where the value is below the
        variable's ``minimum`` or above its ``maximum``. Missing values (NaN)
        are not out of range.

    Notes
    -----
    The ranges are our own choices, documented in :mod:`fluxpart.variables`.
    """
    columns = {}
    for name in _RANGE_CHECKED:
        if name in frame.columns:
            values = _as_float(frame[name], name)
            variable = VARIABLES[name]
            columns[f"{name}_out_of_range"] = (values < variable.minimum) | (values > variable.maximum)
    return pd.DataFrame(columns, index=frame.index, dtype=bool)


def despike(nee, index, is_night, *, z=4.0, block_days=13, min_values=10,
            isolate=True) -> np.ndarray:
    """Detect spikes in NEE by the double-differenced series (Papale et al. 2006).

    Parameters
    ----------
    nee : array_like
        Net ecosystem exchange [µmol m-2 s-1]; NaN where missing or already
        rejected.
    index : pandas.DatetimeIndex
        Interval start times, same length as `nee`.
    is_night : array_like of bool
        True for night records, same length as `nee`.
    z : float, optional
        Width of the acceptance band in robust standard deviations [1];
        default 4, Papale et al. (2006) (m).
    block_days : float, optional
        Length of the blocks within which the median and MAD are taken [days];
        default 13, Papale et al. (2006) (m).
    min_values : int, optional
        Fewest double differences in a block (of one time of day) for it to
        be screened; blocks with fewer are left unflagged. Default 10, our
        choice: a MAD of fewer values is not a usable scale.
    isolate : bool, optional
        If True (default, our refinement), a candidate is only flagged where
        its value stands out from the records on both sides, and further
        passes flag the rest of short bursts of spikes (see Notes). False
        applies the published criterion alone, in one pass.

    Returns
    -------
    numpy.ndarray of bool
        True where the record is a spike.

    Raises
    ------
    FluxpartError
        If the lengths of `nee`, `index` and `is_night` differ.
    TimestampError
        If `index` is not a DatetimeIndex.
    ConfigError
        If `z`, `block_days` or `min_values` is not positive.

    Notes
    -----
    Papale et al. (2006), section 2.2, eqs. 1–2 (m):
    ``d_i = (NEE_i - NEE_{i-1}) - (NEE_{i+1} - NEE_i)``, and record ``i`` is a
    spike where ``d_i < Md - z MAD / 0.6745`` or ``d_i > Md + z MAD / 0.6745``,
    with ``Md`` the median of ``d`` and ``MAD`` the median of ``|d - Md|``,
    computed in blocks of `block_days`, separately for day and night records.

    Our refinement (``isolate``): a spike of size ``s`` makes its own ``d``
    about ``2s`` and those of its two neighbours about ``-s``, so large
    spikes would also reject their valid neighbours. 0.8.1–0.19.0 flagged a
    candidate only where its ``|d - Md|`` was at least that of both
    neighbouring valid records. Spikes also come in short bursts (the sensor
    contaminated for an hour or two): a two-record burst of height ``h``
    gives ``d`` about ``h`` at both its records and ``-h`` at both outer
    neighbours, and a three-record burst about 0 at its middle record, so
    that rule caught part of a burst and could flag an outer neighbour in
    its place. Since 0.20.0 a candidate is flagged where its value departs,
    with the sign of ``d - Md`` and by at least ``|d - Md| / 4``, on each
    side from the mean of the two nearest records that are not candidates or
    from the nearest alone (on a steep ramp the mean of two sits a record
    further along the slope): a
    lone spike departs by half its ``|d|``, a record of a two-record burst
    by all of it, the edge of a three-record burst by half of it on its inner
    side (the middle is not a candidate), and a record beside a spike or a
    burst hardly from the records on its other side. Up to
    :data:`_BURST_PASSES` further passes drop the records flagged so far
    and test the shorter series again with each block's first-pass median
    and MAD, which flags the middle of a three-record burst (``d`` about
    ``2h`` once its edges are dropped). On an independent known-truth trial
    with spikes in bursts of 2–3 records (``trial_sixth.py``, site G) the
    neighbour rule found 147 of 382 spike records and flagged 102 records
    without a spike (annual NEE error +48.4 g C m-2), this rule 258 and 29
    (+21.0); on 14 generated site-years with single spikes 295 and 296 of
    299 spikes, and 707 and 701 records without a spike. Spikes on steep
    ramps are found less often (15 standard deviations on a ramp of 4 per
    record: 104 of 200 against 177).

    Gaps: ``d`` is computed on the series of valid (finite) values only; the
    neighbours of a record are the nearest valid records before and after it,
    in time order, whether day or night and however far away. The first and
    last valid record have no ``d`` and are never flagged. Blocks are counted
    in whole days from midnight of the first record's date; a block is
    assigned by the record's own time, and the final block may be shorter.

    References
    ----------
    Papale, D., Reichstein, M., Aubinet, M., Canfora, E., Bernhofer, C.,
    Kutsch, W., Longdoz, B., Rambal, S., Valentini, R., Vesala, T. & Yakir, D.
    (2006). Towards a standardized processing of net ecosystem exchange
    measured with eddy covariance technique: algorithms and uncertainty
    estimation. Biogeosciences 3:571–583. doi:10.5194/bg-3-571-2006
    """
    index = datetime_index(index)
    nee = _as_float(nee, "nee")
    is_night = as_bool(is_night, "is_night")
    _check_lengths(index, nee=nee, is_night=is_night)
    _check_positive(z=z, block_days=block_days, min_values=min_values)

    spikes = np.zeros(len(nee), dtype=bool)
    positions = np.flatnonzero(np.isfinite(nee))
    if len(positions) < 3:
        return spikes
    days = _days_since_first_midnight(index)[positions]
    block = np.floor(days / block_days).astype(np.int64)
    group = block * 2 + is_night[positions].astype(np.int64)
    values = nee[positions]
    double_difference = _double_difference(values)
    series = pd.Series(double_difference)
    grouped = series.groupby(group)
    median = grouped.transform("median").to_numpy()
    deviation = pd.Series(np.abs(double_difference - median)).groupby(group)
    mad = deviation.transform("median").to_numpy()
    count = grouped.transform("count").to_numpy()
    usable = (count >= min_values) & (mad > 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        scale = mad / _MAD_NORMAL_QUANTILE
    score = _scores(double_difference, median, scale, usable)
    if not isolate:
        spikes[positions[score > z]] = True
        return spikes
    candidate = _standing_out(values, double_difference - median, score > z)
    candidate |= _burst_records(values, candidate, median, scale, usable, z)
    spikes[positions[candidate]] = True
    return spikes


def _burst_records(values, flagged, median, scale, usable, z) -> np.ndarray:
    """Records of spike bursts left after the first pass, found pass by pass.

    Each pass drops the records flagged so far from the series of valid values and
    applies :func:`_standing_out` to the double differences of the shorter series, with
    each block's median and MAD of the first pass; see :func:`despike`.
    """
    found = np.zeros(len(values), dtype=bool)
    dropped = flagged.copy()
    for _ in range(_BURST_PASSES):
        series = np.flatnonzero(~dropped)
        centred = _double_difference(values[series]) - median[series]
        beyond = _scores(centred + median[series], median[series], scale[series],
                         usable[series]) > z
        new = series[_standing_out(values[series], centred, beyond)]
        if not new.size:
            break
        found[new] = True
        dropped[new] = True
    return found


def _standing_out(values, centred, beyond) -> np.ndarray:
    """Records `beyond` the band whose value departs, in the direction of `centred`
    (``d - Md``) and by at least ``|d - Md| / 4``, on each side from the mean of the two
    nearest records that are not beyond or from the nearest alone.

    A lone spike of size s departs by s from both sides (``|d|`` about 2s); a record of a
    two-record burst by the burst's height (``|d|`` about the height), and the edge record
    of a three-record burst, whose nearest inner record (the middle, ``d`` about 0) is not
    beyond, by half of it on the inner side; a record next to a spike or burst, whose
    ``|d|`` is raised by it, hardly departs from the records on its other side. Where only
    one clean record lies before (after) a record, the nearest-alone test is the one made
    on that side; the first and the last record are never beyond (no ``d``).
    """
    n = len(values)
    position = np.arange(n)
    out = beyond.copy()
    for step in (1, -1):                      # references before, then after
        order = position if step == 1 else position[::-1]
        clean = ~beyond[order]
        # positions (in `order`) of the nearest and second-nearest clean record before each
        last = np.maximum.accumulate(np.where(clean, np.arange(n), -1))
        nearest = np.concatenate(([-1], last[:-1]))
        before_nearest = np.where(nearest > 0, np.concatenate(([-1], last))[np.maximum(nearest, 0)],
                                  -1)
        valid = (nearest >= 0) & (before_nearest >= 0)
        level = np.full(n, np.nan)
        level[valid] = 0.5 * (values[order][nearest[valid]]
                              + values[order][before_nearest[valid]])
        # the nearest alone also stands where it is the only clean record on that side
        # (the first or last record of the series, never beyond: no d)
        closest = np.full(n, np.nan)
        closest[nearest >= 0] = values[order][nearest[nearest >= 0]]
        side, near = np.empty(n), np.empty(n)
        side[order], near[order] = level, closest
        need = np.abs(centred) / 4.0
        with np.errstate(invalid="ignore"):
            # the nearest record alone where it is the farther from the value: on a steep
            # ramp the mean of two sits a record further up (or down) the slope
            out &= ((np.sign(centred) * (values - side) >= need)
                    | (np.sign(centred) * (values - near) >= need))
    return out


def _double_difference(values) -> np.ndarray:
    """``d_i = 2 x_i - x_{i-1} - x_{i+1}``; NaN at both ends."""
    out = np.full(len(values), np.nan)
    out[1:-1] = 2.0 * values[1:-1] - values[:-2] - values[2:]
    return out


def _scores(double_difference, median, scale, usable) -> np.ndarray:
    """``|d - Md|`` in robust standard deviations; 0 where the block is not usable or
    ``d`` is not defined (the ends of the series)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        score = np.abs(double_difference - median) / scale
    return np.where(usable & np.isfinite(score), score, 0.0)


def rg_above_potential(rg, potential, *, margin=50.0, relative_margin=0.2) -> np.ndarray:
    """Flag global radiation above the potential (top-of-atmosphere) radiation.

    Parameters
    ----------
    rg : array_like
        Measured global radiation [W m-2].
    potential : array_like
        Potential radiation on a horizontal plane at the top of the atmosphere
        for the same interval [W m-2], same length as `rg`.
    margin : float, optional
        Absolute allowance [W m-2]; default 50 W m-2, our choice.
    relative_margin : float, optional
        Allowance relative to the potential radiation [1]; default 0.2, our
        choice.

    Returns
    -------
    numpy.ndarray of bool
        True where ``rg > potential + max(margin, relative_margin * potential)``;
        False where either value is missing.

    Raises
    ------
    FluxpartError
        If the lengths differ.
    ConfigError
        If a margin is negative.

    Notes
    -----
    Surface global radiation cannot exceed the top-of-atmosphere value except
    briefly under broken cloud (cloud enhancement) or by sensor error or a
    shifted clock (common practice). The allowance, the larger of 50 W m-2 and
    20 % of the potential, is our choice: it passes cloud enhancement of
    half-hourly means and flags night-time radiation and clock shifts of an
    hour or more.
    """
    rg = _as_float(rg, "rg")
    potential = _as_float(potential, "potential")
    _check_lengths(None, rg=rg, potential=potential)
    for name, value in (("rg_margin", margin), ("rg_relative_margin", relative_margin)):
        if not _is_number(value) or value < 0:
            raise ConfigError(f"{name} = {value!r}: expected a number >= 0")
    allowance = np.maximum(margin, relative_margin * potential)
    with np.errstate(invalid="ignore"):
        return np.asarray(rg > potential + allowance, dtype=bool)


def site_flag(nee_flag) -> np.ndarray:
    """Flag records the site's own quality flag rejects.

    Parameters
    ----------
    nee_flag : array_like
        The site's flag [1]; non-zero = reject.

    Returns
    -------
    numpy.ndarray of bool
        True where the flag is non-zero. A missing flag (NaN) is no judgement
        by the site and does not reject the record.
    """
    values = _as_float(nee_flag, "nee_flag")
    return np.isfinite(values) & (values != 0.0)


def low_ustar(ustar, is_night, threshold) -> np.ndarray:
    """Flag night records whose friction velocity is below the threshold.

    Parameters
    ----------
    ustar : array_like
        Friction velocity [m s-1]; NaN where missing or rejected.
    is_night : array_like of bool
        True for night records.
    threshold : float or array_like
        u* threshold [m s-1], one value or one per record (for example the
        threshold of each record's year).

    Returns
    -------
    numpy.ndarray of bool
        True for night records with ``ustar < threshold`` and for night
        records with u* missing: without u* the turbulence cannot be shown to
        be sufficient, so the flux is rejected (common practice). Day records
        are never flagged.

    Raises
    ------
    ConfigError
        If a threshold is negative, or missing (NaN) at a night record.
    FluxpartError
        If the lengths differ.

    Notes
    -----
    Filtering night NEE at low u*: Goulden et al. (1996); threshold detection
    in :mod:`fluxpart.ustar`.

    References
    ----------
    Goulden, M. L., Munger, J. W., Fan, S.-M., Daube, B. C. & Wofsy, S. C.
    (1996). Measurements of carbon sequestration by long-term eddy covariance:
    methods and a critical evaluation of accuracy. Global Change Biology
    2:169–182. doi:10.1111/j.1365-2486.1996.tb00070.x
    """
    ustar = _as_float(ustar, "ustar")
    is_night = as_bool(is_night, "is_night")
    threshold = np.broadcast_to(np.asarray(threshold, dtype=float), ustar.shape) \
        if np.ndim(threshold) == 0 else _as_float(threshold, "ustar_threshold")
    _check_lengths(None, ustar=ustar, is_night=is_night, ustar_threshold=threshold)
    if np.any(threshold < 0):
        raise ConfigError(f"ustar_threshold: {np.nanmin(threshold)!r} m s-1 is negative; "
                          "expected a number >= 0")
    missing_threshold = is_night & np.isnan(threshold)
    if missing_threshold.any():
        row = int(np.flatnonzero(missing_threshold)[0])
        raise ConfigError(f"ustar_threshold is missing (NaN) at night record {row}; give a "
                          "threshold for every night record (a fixed fallback for years "
                          "without a detected threshold)")
    with np.errstate(invalid="ignore"):
        below = ~(ustar >= threshold)
    return is_night & below


@dataclass(frozen=True)
class Screening:
    """Result of :func:`screen`.

    Attributes
    ----------
    flags : pandas.DataFrame
        One boolean column per condition, same index as the input:
        ``<name>_out_of_range`` for every canonical variable present,
        ``nee_site_flag``, ``nee_spike``, ``nee_low_ustar`` (all False when no
        threshold was given) and ``rg_above_potential``. Each column is its
        condition on its own, except ``nee_spike``, which is only evaluated on
        the records that passed the range and site checks.
    reason : pandas.Series
        ``int8`` code of the first reason that rejected NEE, see
        :data:`REASON_CODES`; 0 = kept.
    nee_screened : pandas.Series
        NEE with every rejected value set to NaN [µmol m-2 s-1].
    screened : pandas.DataFrame
        The canonical variables of the input (without ``nee_flag``) with
        rejected values set to NaN: NEE as `nee_screened`; drivers where out
        of range; ``rg`` also where above potential.
    counts : pandas.Series
        Records per reason name, in code order (``kept``, ``missing``, ...).
    thresholds : dict
        The settings used, JSON-compatible, for the manifest.
    """

    flags: pd.DataFrame
    reason: pd.Series
    nee_screened: pd.Series
    screened: pd.DataFrame
    counts: pd.Series
    thresholds: dict


def screen(frame: pd.DataFrame, potential, is_night, *, despike_z=4.0, despike_block_days=13,
           rg_margin=50.0, rg_relative_margin=0.2, ustar_threshold=None) -> Screening:
    """Screen NEE and its drivers.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical columns on the canonical time axis (a DatetimeIndex of
        interval starts); ``nee`` [µmol m-2 s-1] is required, ``nee_flag`` [1]
        and ``ustar`` [m s-1] are used where present.
    potential : array_like
        Potential (top-of-atmosphere) radiation of each interval [W m-2].
    is_night : array_like of bool
        True for night records.
    despike_z : float, optional
        See `z` of :func:`despike`; default 4, Papale et al. (2006) (m).
    despike_block_days : float, optional
        See `block_days` of :func:`despike`; default 13 days, Papale et al.
        (2006) (m).
    rg_margin, rg_relative_margin : float, optional
        Allowances of :func:`rg_above_potential` [W m-2] and [1]; defaults 50
        W m-2 and 0.2, our choice.
    ustar_threshold : float or array_like or None, optional
        u* threshold [m s-1], scalar or per record; None (default) skips the
        u* filter (the threshold is usually detected from the data screened
        without it).

    Returns
    -------
    Screening
        Flags, reasons, screened series, counts and thresholds.

    Raises
    ------
    MissingColumnError
        If ``nee`` is absent, or ``ustar`` is absent while a threshold is given.
    TimestampError
        If the index is not a DatetimeIndex.
    FluxpartError
        If `potential` or `is_night` does not match the frame's length.

    Notes
    -----
    Order of application, which is also the order of the reason codes:
    (1) plausible range of every variable; (2) the site's flag; (3) despiking,
    on NEE with the range and site rejections removed; (4) the u* filter,
    with u* out of its range treated as missing (rejected at night). Rg above
    potential rejects the Rg value, not the flux: the radiation sensor or the
    clock is at fault, and Rg is a driver of gap filling and partitioning.

    References
    ----------
    Papale, D. et al. (2006). Biogeosciences 3:571–583. doi:10.5194/bg-3-571-2006
    """
    if "nee" not in frame.columns:
        raise MissingColumnError("screening needs the column 'nee' (net ecosystem exchange, "
                                 f"µmol m-2 s-1); found: {', '.join(map(str, frame.columns))}")
    index = datetime_index(frame.index)
    potential = _as_float(potential, "potential")
    is_night = as_bool(is_night, "is_night")
    _check_lengths(index, potential=potential, is_night=is_night)

    flags = range_flags(frame)
    nee = _as_float(frame["nee"], "nee")
    missing = np.isnan(nee)
    out_of_range = flags["nee_out_of_range"].to_numpy()
    flagged_by_site = (site_flag(frame["nee_flag"]) if "nee_flag" in frame.columns
                       else np.zeros(len(nee), dtype=bool))
    before_despike = np.where(out_of_range | flagged_by_site, np.nan, nee)
    spikes = despike(before_despike, index, is_night, z=despike_z, block_days=despike_block_days)

    if ustar_threshold is None:
        too_calm = np.zeros(len(nee), dtype=bool)
    else:
        if "ustar" not in frame.columns:
            raise MissingColumnError("the u* filter needs the column 'ustar' (friction velocity, "
                                     "m s-1); give it or leave ustar_threshold = None")
        ustar = np.where(flags["ustar_out_of_range"].to_numpy(), np.nan,
                         _as_float(frame["ustar"], "ustar"))
        too_calm = low_ustar(ustar, is_night, ustar_threshold)

    if "rg" in frame.columns:
        rg_high = rg_above_potential(frame["rg"], potential, margin=rg_margin,
                                     relative_margin=rg_relative_margin)
    else:
        rg_high = np.zeros(len(nee), dtype=bool)

    flags = flags.assign(nee_site_flag=flagged_by_site, nee_spike=spikes,
                         nee_low_ustar=too_calm, rg_above_potential=rg_high)

    conditions = [missing, out_of_range, flagged_by_site, spikes, too_calm]
    reason = np.select(conditions, list(range(1, len(conditions) + 1)), default=0)
    reason = pd.Series(reason.astype(np.int8), index=frame.index, name="reason")
    nee_screened = pd.Series(np.where(reason.to_numpy() == 0, nee, np.nan), index=frame.index,
                             name="nee")

    screened = {}
    for name in frame.columns:
        if name == "nee":
            screened[name] = nee_screened.to_numpy()
        elif name in _RANGE_CHECKED:
            rejected = flags[f"{name}_out_of_range"].to_numpy()
            if name == "rg":
                rejected = rejected | rg_high
            screened[name] = np.where(rejected, np.nan, _as_float(frame[name], name))
    screened = pd.DataFrame(screened, index=frame.index)

    counts = pd.Series(np.bincount(reason.to_numpy(), minlength=len(REASON_CODES)),
                       index=pd.Index(list(REASON_CODES.values()), name="reason"),
                       name="records", dtype=np.int64)
    thresholds = {
        "plausible_ranges": {name: [VARIABLES[name].minimum, VARIABLES[name].maximum]
                             for name in _RANGE_CHECKED if name in frame.columns},
        "despike_z": float(despike_z),
        "despike_block_days": float(despike_block_days),
        "rg_margin": float(rg_margin),
        "rg_relative_margin": float(rg_relative_margin),
        "ustar_threshold": _threshold_record(ustar_threshold),
        "reason_codes": {str(code): name for code, name in REASON_CODES.items()},
    }
    return Screening(flags=flags, reason=reason, nee_screened=nee_screened, screened=screened,
                     counts=counts, thresholds=thresholds)


def _threshold_record(threshold):
    """JSON-compatible record of the u* threshold used."""
    if threshold is None:
        return None
    if np.ndim(threshold) == 0:
        return float(threshold)
    values = np.asarray(threshold, dtype=float)
    return {"per_record": True,
            "values": [float(v) for v in np.unique(values[np.isfinite(values)])]}


def _is_number(value) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool)


def _check_positive(**settings) -> None:
    for name, value in settings.items():
        if not _is_number(value) or not value > 0:
            raise ConfigError(f"despike {name} = {value!r}: expected a positive number")


def _as_float(values, name: str) -> np.ndarray:
    """A new float array of `values`, or an error naming the column."""
    try:
        return np.array(values, dtype=float)
    except (TypeError, ValueError):
        raise FluxpartError(f"column {name!r} must hold numbers; it holds values that are "
                            "not numeric") from None






def _check_lengths(index, **arrays) -> None:
    expected = len(index) if index is not None else len(next(iter(arrays.values())))
    for name, array in arrays.items():
        if len(array) != expected:
            raise LengthMismatchError(f"{name} has {len(array)} values but the record has "
                                      f"{expected}; give one value per interval")


def _days_since_first_midnight(index: pd.DatetimeIndex) -> np.ndarray:
    """Elapsed time since midnight of the first record's date [days]."""
    return np.asarray((index - index[0].normalize()) / pd.Timedelta(days=1), dtype=float)
