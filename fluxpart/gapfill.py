"""Gap filling by marginal distribution sampling (MDS), vectorised with NumPy.

A gap of the target series at time t is filled with the mean of *measured* target
records that were taken under similar conditions close in time (Reichstein et al.
2005, appendix). Only measured records are ever averaged, never values filled by an
earlier pass, so the outcome of every gap depends only on the first pass of the
sequence below that finds at least one record for it.

Sequence of passes (K = half-width of the time window [days]):

=====  ======================  ===============================================  ======
order  step                    records averaged                                 K
=====  ======================  ===============================================  ======
1      1  all drivers          |Rg - Rg(t)| <= 50 W m-2, |Tair - Tair(t)| <=    7
                               2.5 °C, |VPD - VPD(t)| <= 5 hPa, within ±K days
2      1  all drivers          as above                                         14
3      2  radiation only       |Rg - Rg(t)| <= 50 W m-2 within ±K days          7
4-6    3  mean diurnal course  same time of day ±1 h, on the day of t and the   0, 1, 2
                               K days on either side
7...   widened rounds r = 1, 2, ...: step 1 with K = 14 + 7r, step 2 with
       K = 7 + 7r, step 3 with K = 7r, in this order within a round
=====  ======================  ===============================================  ======

Step 1 is tried only where Rg, Tair and VPD are all available at t, step 2 only
where Rg is available at t; step 3 needs no driver. Widening stops at the largest
K <= ``max_window_days`` (default 70 days, our choice: the paper gives no limit
(m)); a pass whose K exceeds it is skipped, and rounds stop once the diurnal
window covers the whole record. A gap that no pass can fill stays NaN with
method -1. One record averaged is enough to fill (m).

Time windows are measured in time, not in record counts: ±K days around t is every
record within K·(records per day) records of t, and the diurnal course at ±1 h
takes the records within ±2 records (30-min data) or ±1 record (60-min data) of
t + d days, |d| <= K. Windows cross midnight and year boundaries.

Reported window size ``window_days`` is the *full* width of the time window
[days]: 2K for steps 1 and 2 (±K days around t), 2K + 1 for step 3 (the day of t
and K days on either side). Quality class (Reichstein et al. 2005, appendix (m)):
A for steps 1–2 with a full window <= 14 days or step 3 with <= 1 day; B for
steps 1–2 with <= 28 days or step 3 with <= 5 days; C otherwise.

"Within ±tolerance" is inclusive and evaluated as ``x(t) - tol <= x <= x(t) + tol``
with the bounds in float64. The fill is the mean of the records found; ``std`` is
their population standard deviation (ddof = 0, so 0 for a single record).

Implementation: the passes loop over steps, window sizes and blocks of neighbouring
gaps that share one window slice, never over single gaps. In a block, a (gaps ×
window records) boolean similarity matrix is built by broadcasting. The driver
comparisons use integer ranks of the driver values, which give the same decisions
as the float comparisons and are several times faster. The similar pairs of each
gap form one run of the flattened matrix, and the runs are reduced to mean and
two-pass standard deviation with ``numpy.add.reduceat`` (a fixed summation order,
so results are reproducible bit for bit). The diurnal course gathers, for every gap,
the few records at the fixed offsets d·(records per day) + o. Block sizes keep every
temporary below a fixed number of elements, so memory grows linearly with the record
length.

References
----------
Reichstein, M., Falge, E., Baldocchi, D., et al. (2005). On the separation of net
ecosystem exchange into assimilation and ecosystem respiration: review and improved
algorithm. Global Change Biology 11, 1424–1439, appendix A.
doi:10.1111/j.1365-2486.2005.001002.x

Moffat, A. M., Papale, D., Reichstein, M., et al. (2007). Comprehensive comparison of
gap-filling techniques for eddy covariance net carbon fluxes. Agricultural and Forest
Meteorology 147, 209–232. doi:10.1016/j.agrformet.2007.08.011
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .constants import SECONDS_PER_DAY
from .errors import (
    ConfigError,
    DuplicateTimestampError,
    FluxpartError,
    ImplausibleValueError,
    LengthMismatchError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
)

__all__ = [
    "METHOD_ALL_DRIVERS",
    "METHOD_DIURNAL_COURSE",
    "METHOD_MEASURED",
    "METHOD_RADIATION",
    "METHOD_UNFILLED",
    "QUALITY_A",
    "QUALITY_B",
    "QUALITY_C",
    "QUALITY_MEASURED",
    "QUALITY_UNFILLED",
    "driver_conditions",
    "fill_drivers",
    "fill_frame",
    "fill_marginal",
    "pass_sequence",
    "quality_class",
]

#: Method codes of the ``method`` column.
METHOD_UNFILLED = -1
METHOD_MEASURED = 0
METHOD_ALL_DRIVERS = 1
METHOD_RADIATION = 2
METHOD_DIURNAL_COURSE = 3

#: Quality codes of the ``quality`` column (int8).
QUALITY_UNFILLED = -1
QUALITY_MEASURED = 0
QUALITY_A = 1
QUALITY_B = 2
QUALITY_C = 3

#: Largest full window [days] of quality A and B, for steps 1–2 (similar drivers)
#: and step 3 (diurnal course); Reichstein et al. (2005), appendix (m).
_A_SIMILAR_DAYS, _A_DIURNAL_DAYS = 14.0, 1.0
_B_SIMILAR_DAYS, _B_DIURNAL_DAYS = 28.0, 5.0

#: Defaults: Reichstein et al. (2005), appendix.
_RG_TOLERANCE = 50.0  # [W m-2]
_TAIR_TOLERANCE = 2.5  # [°C]
_VPD_TOLERANCE = 5.0  # [hPa]
#: Largest half-width of any window [days]; our choice (the paper sets no limit (m)).
_MAX_WINDOW_DAYS = 70.0
#: Half-width of the time-of-day window of the diurnal course [minutes]; the paper: ±1 h.
_DIURNAL_HALF_WIDTH_MINUTES = 60
#: Increment of the widened rounds [days]; Reichstein et al. (2005) (m).
_WIDENING_STEP_DAYS = 7
#: Upper bound on the elements of any (gaps × window records) temporary.
_MAX_BLOCK_ELEMENTS = 1 << 20
#: Records per block of gaps sharing one window slice at a gap density of
#: _BLOCK_DENSITY (gaps per record); sparser gaps get longer blocks. Tuned by the
#: benchmark.
_BLOCK_RECORDS = 336
_BLOCK_DENSITY = 0.4

_SPACINGS_MINUTES = (30, 60)
_DRIVERS = ("rg", "tair", "vpd")


# --------------------------------------------------------------------------- checks

def _records_per_day(index) -> tuple[int, int]:
    """Return (records per day, records per diurnal half-width) of a regular index."""
    if not isinstance(index, pd.DatetimeIndex):
        raise SpacingError(f"index: expected a pandas DatetimeIndex, found {type(index).__name__}")
    if len(index) < 2:
        raise SpacingError(f"index: need at least 2 records to know the spacing, found "
                           f"{len(index)}")
    seconds = np.diff(index.to_numpy().astype("datetime64[s]")).astype(np.int64)
    if (seconds < 0).any():
        row = int(np.flatnonzero(seconds < 0)[0]) + 1
        raise NonMonotonicTimestampError(f"index: timestamps go backwards at row {row} "
                                         f"({index[row]}); sort the records by time")
    if (seconds == 0).any():
        row = int(np.flatnonzero(seconds == 0)[0]) + 1
        raise DuplicateTimestampError(f"index: timestamp {index[row]} occurs twice (row {row}); "
                                      "drop duplicate records")
    spacing = int(seconds[0])
    if spacing not in tuple(60 * m for m in _SPACINGS_MINUTES):
        raise SpacingError(f"index: record spacing is {spacing / 60:g} min; expected 30 or 60 "
                           "min")
    irregular = np.flatnonzero(seconds != spacing)
    if irregular.size:
        row = int(irregular[0]) + 1
        raise SpacingError(f"index: irregular spacing at row {row} ({index[row]}): "
                           f"{seconds[row - 1] / 60:g} min instead of {spacing / 60:g} min; "
                           "reindex onto a regular time axis with NaN for missing records")
    per_day = SECONDS_PER_DAY // spacing
    half_width = (_DIURNAL_HALF_WIDTH_MINUTES * 60) // spacing
    return per_day, half_width


def _as_values(values, name: str, index) -> np.ndarray:
    """Return ``values`` as a new float64 vector, checked against ``index``."""
    try:
        if isinstance(values, (pd.Series, pd.Index)):
            array = values.to_numpy(dtype=np.float64, na_value=np.nan, copy=True)
        else:
            array = np.array(values, dtype=np.float64)
    except (TypeError, ValueError):
        raise FluxpartError(f"{name}: expected numbers (NaN where missing)") from None
    if array.ndim != 1:
        raise FluxpartError(f"{name}: expected a 1-D series, found shape {array.shape}")
    if array.size != len(index):
        raise LengthMismatchError(f"{name}: {array.size} values for {len(index)} timestamps; give one "
                                  "value per record of the index")
    infinite = np.isinf(array)
    if infinite.any():
        row = int(np.flatnonzero(infinite)[0])
        raise ImplausibleValueError(f"{name}: infinite value at row {row} ({index[row]}); "
                                    "use NaN for missing records")
    return array


def _check_setting(name: str, value, *, allow_zero=False, allow_inf=False) -> float:
    is_number = isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
        value, bool)
    ok = is_number and not np.isnan(value) and (value > 0 or (allow_zero and value == 0))
    if ok and np.isinf(value) and not allow_inf:
        ok = False
    if not ok:
        kind = "a number >= 0" if allow_zero else "a positive number"
        raise ConfigError(f"{name} = {value!r}: expected {kind}")
    return float(value)


def _driver_columns(frame, names, where: str) -> None:
    if not isinstance(frame, pd.DataFrame):
        raise MissingColumnError(f"{where}: expected a DataFrame with columns "
                                 f"{', '.join(names)}, found {type(frame).__name__}")
    missing = [name for name in names if name not in frame.columns]
    if missing:
        raise MissingColumnError(f"{where}: missing column(s) {', '.join(missing)}; expected "
                                 f"{', '.join(names)} (NaN where unavailable)")


# --------------------------------------------------------------------------- plan

def pass_sequence(*, all_drivers=True, radiation=True, max_window_days=_MAX_WINDOW_DAYS,
                  record_days=np.inf) -> list[tuple[int, int]]:
    """Return the ordered passes of marginal distribution sampling.

    Parameters
    ----------
    all_drivers : bool
        Include step 1 (similar Rg, Tair and VPD).
    radiation : bool
        Include step 2 (similar Rg only).
    max_window_days : float
        Largest half-width of any window [days]; ``numpy.inf`` for no limit.
    record_days : float
        Length of the record [days]; widening stops once the diurnal-course window
        covers it.

    Returns
    -------
    list of (int, int)
        ``(step, half_width_days)`` in the order they are tried.

    Notes
    -----
    Steps 1 at ±7 and ±14 days, step 2 at ±7, step 3 at ±0, ±1, ±2, then rounds
    r = 1, 2, ... of step 1 at ±(14 + 7r), step 2 at ±(7 + 7r), step 3 at ±7r
    (Reichstein et al. 2005, appendix; the 7-day increment (m)). A pass with a
    half-width above ``max_window_days`` is left out.
    """
    limit = _check_setting("max_window_days", max_window_days, allow_zero=True, allow_inf=True)
    passes = []
    if all_drivers:
        passes += [(METHOD_ALL_DRIVERS, 7), (METHOD_ALL_DRIVERS, 14)]
    if radiation:
        passes.append((METHOD_RADIATION, 7))
    passes += [(METHOD_DIURNAL_COURSE, k) for k in (0, 1, 2)]
    if np.isinf(limit) and np.isinf(record_days):
        raise ConfigError("max_window_days = inf: give record_days, the record length [days], "
                          "so that widening can stop at the whole record")
    rounds = np.ceil(max(record_days, 1.0) / _WIDENING_STEP_DAYS)
    if np.isfinite(limit):
        rounds = min(rounds, limit // _WIDENING_STEP_DAYS)
    rounds = int(rounds)
    for r in range(1, rounds + 1):
        step = _WIDENING_STEP_DAYS * r
        if all_drivers:
            passes.append((METHOD_ALL_DRIVERS, 14 + step))
        if radiation:
            passes.append((METHOD_RADIATION, 7 + step))
        passes.append((METHOD_DIURNAL_COURSE, step))
    return [(s, k) for s, k in passes if k <= limit]


def quality_class(method, window_days) -> np.ndarray:
    """Quality class of filled records by method and full window width.

    Parameters
    ----------
    method : array_like of int
        Method step: 0 measured, 1 all drivers, 2 radiation only, 3 diurnal
        course, -1 unfilled.
    window_days : array_like of float
        Full width of the time window [days] (2K for steps 1–2, 2K + 1 for step 3).

    Returns
    -------
    numpy.ndarray of int8
        0 measured, 1 A, 2 B, 3 C, -1 unfilled.

    Notes
    -----
    A: steps 1–2 with window <= 14 days or step 3 with window <= 1 day; B: steps
    1–2 with window <= 28 days or step 3 with window <= 5 days; C: the rest.
    Reichstein et al. (2005), appendix (m).
    """
    method = np.asarray(method)
    window = np.asarray(window_days, dtype=np.float64)
    similar = (method == METHOD_ALL_DRIVERS) | (method == METHOD_RADIATION)
    diurnal = method == METHOD_DIURNAL_COURSE
    quality = np.full(method.shape, QUALITY_C, dtype=np.int8)
    quality[(similar & (window <= _B_SIMILAR_DAYS))
            | (diurnal & (window <= _B_DIURNAL_DAYS))] = QUALITY_B
    quality[(similar & (window <= _A_SIMILAR_DAYS))
            | (diurnal & (window <= _A_DIURNAL_DAYS))] = QUALITY_A
    quality[method == METHOD_MEASURED] = QUALITY_MEASURED
    quality[method == METHOD_UNFILLED] = QUALITY_UNFILLED
    return quality


def _full_width_days(step: int, half_width_days: int) -> float:
    if step == METHOD_DIURNAL_COURSE:
        return 2.0 * half_width_days + 1.0
    return 2.0 * half_width_days


# --------------------------------------------------------------------------- kernels

def _ranked(window):
    """Integer ranks of ``window`` (smallest dtype that holds them) and its sorted values."""
    order = np.argsort(window)
    rank = np.empty(window.size, dtype=np.min_scalar_type(max(window.size - 1, 0)))
    rank[order] = np.arange(window.size)
    return rank, window[order]


class _RankTables:
    """Ranks of the usable driver values of one step, by overlapping segments.

    Comparing small integers is several times faster than comparing float64 and
    gives the same decisions: for sorted values ``ordered`` of a set containing
    the window, ``lower <= x[j] <= upper`` holds exactly when
    ``searchsorted(ordered, lower, "left") <= rank[j] < searchsorted(ordered,
    upper, "right")``. Segment k covers usable positions [kS, kS + 2S) with
    S = 32767, so every window of at most S positions lies in one segment and
    its ranks fit in uint16. Tables are built when first needed and reused by
    every pass of the step.
    """

    _SEGMENT = 32767

    def __init__(self, usable_drivers):
        self._drivers = usable_drivers
        self._tables = {}

    def keys(self, p, q, lower, upper):
        """(rank key, low, high) per driver for the window of usable positions [p, q)."""
        if q - p > self._SEGMENT:  # a window wider than a segment: rank it on its own
            tables, offset = [_ranked(driver[p:q]) for driver in self._drivers], p
        else:
            k = p // self._SEGMENT
            offset = k * self._SEGMENT
            if k not in self._tables:
                self._tables[k] = [_ranked(driver[offset:offset + 2 * self._SEGMENT])
                                   for driver in self._drivers]
            tables = self._tables[k]
        out = []
        for (rank, ordered), low, high in zip(tables, lower, upper, strict=True):
            out.append((rank[p - offset:q - offset],
                        np.searchsorted(ordered, low, side="left").astype(rank.dtype),
                        np.searchsorted(ordered, high, side="right").astype(rank.dtype)))
        return out


def _block_records(n_gaps, gap_span, half_width):
    """Records per block: longer blocks where gaps are sparse, within the memory cap."""
    density = n_gaps / max(gap_span, 1)
    records = int(_BLOCK_RECORDS * np.sqrt(_BLOCK_DENSITY / max(density, 1e-6)))
    records = max(1, min(records, _MAX_BLOCK_ELEMENTS // max(half_width, 1)))
    # Expected (gaps × window) elements within the cap, and never above 8 times it
    # however the gaps cluster.
    while records > 1 and (
            records * (records + 2 * half_width) * min(density, 1.0) > _MAX_BLOCK_ELEMENTS
            or records * (records + 2 * half_width) > 8 * _MAX_BLOCK_ELEMENTS):
        records //= 2
    return records


def _similar_conditions_pass(values, usable, gaps, half_width, conditions, tables):
    """Mean, count and std of usable records similar to each gap within ±half_width.

    ``usable`` are the sorted record numbers of measured target records whose
    condition drivers are all available; ``conditions`` are (driver, tolerance)
    pairs; ``half_width`` is in records; ``tables`` are the step's
    :class:`_RankTables`. Record j is similar to gap i when ``x[i] - tolerance
    <= x[j] <= x[i] + tolerance`` for every driver x (bounds in float64) and
    ``|j - i| <= half_width``.
    """
    mean = np.full(gaps.size, np.nan)
    count = np.zeros(gaps.size, dtype=np.int64)
    spread = np.full(gaps.size, np.nan)
    if gaps.size == 0 or usable.size == 0:
        return mean, count, spread
    # Blocks of record numbers: the gaps of a block share one window slice.
    block = gaps // _block_records(gaps.size, gaps[-1] - gaps[0] + 1, half_width)
    starts = np.flatnonzero(np.r_[True, block[1:] != block[:-1]])
    ends = np.r_[starts[1:], gaps.size]
    # Window of each gap as a range of positions in ``usable``.
    time_low = np.searchsorted(usable, gaps - half_width, side="left")
    time_high = np.searchsorted(usable, gaps + half_width, side="right")
    usable_values = values[usable]
    lowers = [driver[gaps] - tolerance for driver, tolerance in conditions]
    uppers = [driver[gaps] + tolerance for driver, tolerance in conditions]
    for a, b in zip(starts, ends, strict=True):
        p, q = time_low[a], time_high[b - 1]
        if p == q:
            continue
        n_rows, width = b - a, q - p
        position = np.arange(width, dtype=np.min_scalar_type(width))
        keys = [(position, (time_low[a:b] - p).astype(position.dtype),
                 (time_high[a:b] - p).astype(position.dtype))]
        keys += tables.keys(p, q, [x[a:b] for x in lowers], [x[a:b] for x in uppers])
        similar = np.ones((n_rows, width), dtype=bool)
        scratch = np.empty_like(similar)
        for key, low, high in keys:
            similar &= np.greater_equal(key[None, :], low[:, None], out=scratch)
            similar &= np.less(key[None, :], high[:, None], out=scratch)
        # Similar pairs in row-major order: each row's records are one run.
        flat = np.flatnonzero(similar)
        if flat.size == 0:
            continue
        n_similar = np.diff(np.searchsorted(flat, np.arange(n_rows + 1) * width))
        column = flat - np.repeat(np.arange(n_rows) * width, n_similar)
        picked = usable_values[p:q][column]
        found = n_similar > 0
        n_found = n_similar[found]
        run_starts = np.cumsum(n_found) - n_found
        found_mean = np.add.reduceat(picked, run_starts) / n_found
        deviation = picked - np.repeat(found_mean, n_found)
        deviation *= deviation
        rows = np.flatnonzero(found) + a
        mean[rows] = found_mean
        count[rows] = n_found
        spread[rows] = np.sqrt(np.add.reduceat(deviation, run_starts) / n_found)
    return mean, count, spread


def _diurnal_course_pass(values, measured, gaps, half_width_days, per_day, diurnal_records):
    """Mean, count and std of measured records at the same time of day ±1 h, ±K days."""
    mean = np.full(gaps.size, np.nan)
    count = np.zeros(gaps.size, dtype=np.int64)
    spread = np.full(gaps.size, np.nan)
    if gaps.size == 0:
        return mean, count, spread
    days = np.arange(-half_width_days, half_width_days + 1) * per_day
    offsets = (days[:, None] + np.arange(-diurnal_records, diurnal_records + 1)[None, :]).ravel()
    n = values.size
    chunk = max(1, _MAX_BLOCK_ELEMENTS // offsets.size)
    for a in range(0, gaps.size, chunk):
        rows = gaps[a:a + chunk]
        where = rows[:, None] + offsets[None, :]
        inside = (where >= 0) & (where < n)
        np.clip(where, 0, n - 1, out=where)
        ok = inside & measured[where]
        n_ok = np.count_nonzero(ok, axis=1)
        picked = np.where(ok, values[where], 0.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            chunk_mean = picked.sum(axis=1) / n_ok
            deviation = np.where(ok, picked - chunk_mean[:, None], 0.0)
            chunk_spread = np.sqrt((deviation * deviation).sum(axis=1) / n_ok)
        mean[a:a + chunk] = chunk_mean
        count[a:a + chunk] = n_ok
        spread[a:a + chunk] = chunk_spread
    return mean, count, spread


def _fill_series(values, per_day, diurnal_records, *, all_conditions, radiation_condition,
                 max_window_days):
    """Run the pass sequence on one series; return the output columns as arrays.

    ``all_conditions`` are (driver, tolerance) pairs of step 1 or ``None``;
    ``radiation_condition`` is the (driver, tolerance) pair of step 2 or ``None``.
    """
    n = values.size
    measured = ~np.isnan(values)
    value = values.copy()
    method = np.where(measured, METHOD_MEASURED, METHOD_UNFILLED).astype(np.int8)
    window_days = np.where(measured, 0.0, np.nan)
    count = np.zeros(n, dtype=np.int64)
    spread = np.full(n, np.nan)
    remaining = ~measured
    if not measured.any() or not remaining.any():
        return value, method, window_days, count, spread

    def _usable_and_available(conditions):
        usable = measured.copy()
        available = np.ones(n, dtype=bool)
        for driver, _ in conditions:
            finite = ~np.isnan(driver)
            usable &= finite
            available &= finite
        usable = np.flatnonzero(usable)
        return usable, available, _RankTables([driver[usable] for driver, _ in conditions])

    step_inputs = {}
    if all_conditions is not None:
        step_inputs[METHOD_ALL_DRIVERS] = (all_conditions, *_usable_and_available(all_conditions))
    if radiation_condition is not None:
        step_inputs[METHOD_RADIATION] = ([radiation_condition],
                                         *_usable_and_available([radiation_condition]))
    passes = pass_sequence(all_drivers=all_conditions is not None,
                           radiation=radiation_condition is not None,
                           max_window_days=max_window_days, record_days=n / per_day)
    for step, half_width_days in passes:
        if step == METHOD_DIURNAL_COURSE:
            gaps = np.flatnonzero(remaining)
            result = _diurnal_course_pass(values, measured, gaps, half_width_days, per_day,
                                          diurnal_records)
        else:
            conditions, usable, available, tables = step_inputs[step]
            gaps = np.flatnonzero(remaining & available)
            result = _similar_conditions_pass(values, usable, gaps, half_width_days * per_day,
                                              conditions, tables)
        pass_mean, pass_count, pass_spread = result
        found = pass_count > 0
        filled = gaps[found]
        value[filled] = pass_mean[found]
        method[filled] = step
        window_days[filled] = _full_width_days(step, half_width_days)
        count[filled] = pass_count[found]
        spread[filled] = pass_spread[found]
        remaining[filled] = False
        if not remaining.any():
            break
    return value, method, window_days, count, spread


def _output_frame(index, value, method, window_days, count, spread) -> pd.DataFrame:
    return pd.DataFrame(
        {
            "value": value,
            "method": method.astype(np.int8),
            "window_days": window_days,
            "count": count,
            "std": spread,
            "quality": quality_class(method, window_days),
        },
        index=index.copy(),
    )


# --------------------------------------------------------------------------- public

def fill_marginal(target, drivers, index, *, rg_tolerance=_RG_TOLERANCE,
                  tair_tolerance=_TAIR_TOLERANCE, vpd_tolerance=_VPD_TOLERANCE,
                  max_window_days=_MAX_WINDOW_DAYS) -> pd.DataFrame:
    """Fill the gaps of a flux series by marginal distribution sampling.

    Parameters
    ----------
    target : array_like or pandas.Series
        Series to fill, one value per record of ``index`` (taken by position), NaN
        where missing or rejected; e.g. NEE [µmol m-2 s-1].
    drivers : pandas.DataFrame
        Similarity conditions by position, columns ``rg`` [W m-2], ``tair`` [°C] and
        ``vpd`` [hPa], NaN where unavailable.
    index : pandas.DatetimeIndex
        Regular 30- or 60-min time axis, stamps at interval start; may span years.
    rg_tolerance : float
        Similar global radiation within ± this [W m-2]; default 50, Reichstein et
        al. (2005).
    tair_tolerance : float
        Similar air temperature within ± this [°C]; default 2.5, Reichstein et al. (2005).
    vpd_tolerance : float
        Similar vapour pressure deficit within ± this [hPa]; default 5, Reichstein et
        al. (2005).
    max_window_days : float
        Largest half-width of any window [days]; default 70 (our choice),
        ``numpy.inf`` to widen up to the whole record.

    Returns
    -------
    pandas.DataFrame
        On ``index``: ``value`` (measured or filled, in the target's unit, NaN if
        unfillable), ``method`` (int8: 0 measured, 1 all drivers, 2 radiation only,
        3 diurnal course, -1 unfilled), ``window_days`` (full window width [days];
        0 for measured, NaN for unfilled), ``count`` (records averaged; 0 for measured
        and unfilled), ``std`` (population standard deviation of the records
        averaged, in the target's unit; NaN for measured and unfilled) and
        ``quality`` (int8: 0 measured, 1 A, 2 B, 3 C, -1 unfilled).

    Raises
    ------
    SpacingError, NonMonotonicTimestampError, DuplicateTimestampError
        If ``index`` is not a regular 30- or 60-min time axis.
    MissingColumnError
        If ``drivers`` lacks ``rg``, ``tair`` or ``vpd``.
    FluxpartError
        If a series has the wrong length or is not numeric.
    ImplausibleValueError
        If a series holds an infinite value.
    ConfigError
        If a tolerance is not a positive number.

    Notes
    -----
    The pass sequence, window conventions and quality rule are in the module
    docstring. Inputs are not modified.

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    per_day, diurnal_records = _records_per_day(index)
    values = _as_values(target, "target", index)
    _driver_columns(drivers, _DRIVERS, "drivers")
    rg, tair, vpd = (_as_values(drivers[name], f"drivers[{name!r}]", index) for name in _DRIVERS)
    tolerances = [_check_setting(name, value) for name, value in (
        ("rg_tolerance", rg_tolerance), ("tair_tolerance", tair_tolerance),
        ("vpd_tolerance", vpd_tolerance))]
    _check_setting("max_window_days", max_window_days, allow_zero=True, allow_inf=True)
    columns = _fill_series(
        values, per_day, diurnal_records,
        all_conditions=list(zip((rg, tair, vpd), tolerances, strict=True)),
        radiation_condition=(rg, tolerances[0]),
        max_window_days=max_window_days)
    return _output_frame(index, *columns)


def fill_drivers(frame, *, rg_tolerance=_RG_TOLERANCE,
                 max_window_days=_MAX_WINDOW_DAYS) -> pd.DataFrame:
    """Fill the gaps of the meteorological drivers by the same machinery.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical records on a regular 30- or 60-min DatetimeIndex with columns
        ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa] and optionally ``tsoil`` [°C];
        NaN where missing.
    rg_tolerance : float
        Similar global radiation within ± this [W m-2]; default 50, Reichstein et
        al. (2005).
    max_window_days : float
        Largest half-width of any window [days]; default 70 (our choice).

    Returns
    -------
    pandas.DataFrame
        On ``frame.index``: ``rg_filled`` [W m-2], ``rg_fill_quality``,
        ``tair_filled`` [°C], ``tair_fill_quality``, ``vpd_filled`` [hPa],
        ``vpd_fill_quality`` and, if ``tsoil`` is given, ``tsoil_filled`` [°C] and
        ``tsoil_fill_quality``. Quality codes (int8) as in :func:`fill_marginal`.

    Raises
    ------
    MissingColumnError
        If ``rg``, ``tair`` or ``vpd`` is absent.
    SpacingError, NonMonotonicTimestampError, DuplicateTimestampError
        If the index is not a regular 30- or 60-min time axis.
    ConfigError
        If a setting is invalid.

    Notes
    -----
    Rg has no driver to be similar in, so it is filled by the mean diurnal course
    (step 3 and its widened rounds). Tair and VPD are filled with measured Rg as the
    similarity condition (step 2, then step 3), as the paper's appendix does for
    meteorological data (m). Soil temperature lags radiation by hours, so ``tsoil``
    is filled by the diurnal course only (our choice). Only measured values of a
    driver are averaged, and only measured Rg serves as a condition.

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    _driver_columns(frame, _DRIVERS, "frame")
    index = frame.index
    per_day, diurnal_records = _records_per_day(index)
    rg_tol = _check_setting("rg_tolerance", rg_tolerance)
    _check_setting("max_window_days", max_window_days, allow_zero=True, allow_inf=True)
    names = list(_DRIVERS) + (["tsoil"] if "tsoil" in frame.columns else [])
    series = {name: _as_values(frame[name], f"frame[{name!r}]", index) for name in names}
    out = {}
    for name in names:
        uses_radiation = name in ("tair", "vpd")
        value, method, window_days, _, _ = _fill_series(
            series[name], per_day, diurnal_records, all_conditions=None,
            radiation_condition=(series["rg"], rg_tol) if uses_radiation else None,
            max_window_days=max_window_days)
        out[f"{name}_filled"] = value
        out[f"{name}_fill_quality"] = quality_class(method, window_days)
    return pd.DataFrame(out, index=index.copy())


def driver_conditions(filled_drivers) -> pd.DataFrame:
    """Drivers to use as similarity conditions when filling a flux.

    Parameters
    ----------
    filled_drivers : pandas.DataFrame
        Output of :func:`fill_drivers`.

    Returns
    -------
    pandas.DataFrame
        Columns ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa]: the filled driver where
        it was measured or filled with quality A, NaN otherwise.

    Notes
    -----
    Our choice: a driver filled with quality B or C is too uncertain to decide
    similarity, so a flux gap at such a record falls to a later step (e.g. step 2
    if only Rg is good, or the diurnal course).
    """
    columns = [f"{name}_{part}" for name in _DRIVERS for part in ("filled", "fill_quality")]
    _driver_columns(filled_drivers, columns, "filled_drivers")
    out = {}
    for name in _DRIVERS:
        quality = filled_drivers[f"{name}_fill_quality"].to_numpy()
        good = (quality == QUALITY_MEASURED) | (quality == QUALITY_A)
        out[name] = np.where(good, filled_drivers[f"{name}_filled"].to_numpy(np.float64), np.nan)
    return pd.DataFrame(out, index=filled_drivers.index.copy())


def fill_frame(frame, *, target="nee", rg_tolerance=_RG_TOLERANCE,
               tair_tolerance=_TAIR_TOLERANCE, vpd_tolerance=_VPD_TOLERANCE,
               max_window_days=_MAX_WINDOW_DAYS) -> pd.DataFrame:
    """Fill the drivers, then the flux column of a canonical frame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical records on a regular 30- or 60-min DatetimeIndex with the flux
        column ``target`` (NaN where missing or rejected, e.g. after u* filtering)
        and ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa], optionally ``tsoil`` [°C].
    target : str
        Name of the flux column; default ``"nee"`` [µmol m-2 s-1].
    rg_tolerance, tair_tolerance, vpd_tolerance : float
        Similarity tolerances [W m-2], [°C], [hPa]; defaults 50, 2.5, 5 (Reichstein
        et al. 2005).
    max_window_days : float
        Largest half-width of any window [days]; default 70 (our choice).

    Returns
    -------
    pandas.DataFrame
        The columns of :func:`fill_drivers` and ``<target>_filled``,
        ``<target>_fill_method``, ``<target>_fill_window_days``,
        ``<target>_fill_count``, ``<target>_fill_std``, ``<target>_fill_quality``
        (the columns of :func:`fill_marginal`).

    Raises
    ------
    MissingColumnError
        If ``target`` or a driver column is absent.

    Notes
    -----
    The flux is filled with the conditions of :func:`driver_conditions`.
    """
    _driver_columns(frame, [target, *_DRIVERS], "frame")
    drivers = fill_drivers(frame, rg_tolerance=rg_tolerance, max_window_days=max_window_days)
    flux = fill_marginal(frame[target], driver_conditions(drivers), frame.index,
                         rg_tolerance=rg_tolerance, tair_tolerance=tair_tolerance,
                         vpd_tolerance=vpd_tolerance, max_window_days=max_window_days)
    flux.columns = [f"{target}_filled" if c == "value" else f"{target}_fill_{c}"
                    for c in flux.columns]
    return pd.concat([drivers, flux], axis=1)
