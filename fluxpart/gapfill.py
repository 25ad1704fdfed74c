"""Gap filling by marginal distribution sampling (MDS), vectorised with NumPy.

A gap of the target series at time t is filled with the mean of *measured* target
records that were taken under similar conditions close in time (Reichstein et al.
2005, appendix). Only measured records are ever averaged, never values filled by an
earlier pass, so the outcome of every gap depends only on the first pass of the
sequence below that finds at least one record for it.

Sequence of passes (K = half-width of the time window [days]), after the
gap-filling flow chart of the method's first author (Reichstein, gap-filling flow
chart, workshop slides 2004):

=====  ======================  ===============================================  =======
order  step                    records averaged                                 K
=====  ======================  ===============================================  =======
1      1  all drivers          |Rg - Rg(t)| <= 50 W m-2, |Tair - Tair(t)| <=    7
                               2.5 °C, |VPD - VPD(t)| <= 5 hPa, within ±K days
2      1  all drivers          as above                                         14
3      2  radiation only       |Rg - Rg(t)| <= 50 W m-2 within ±K days          7
4-5    3  mean diurnal course  same time of day ±1 h, on the day of t and the   0, 1
                               K days on either side
6...   widened rounds r = 1, 2, ...: step 1 with K = 14 + 7r, step 2 with
       K = 7 + 7r, step 3 with K = 7r, in this order within a round
=====  ======================  ===============================================  =======

Step 1 is tried only where Rg, Tair and VPD are all available at t, step 2 only
where Rg is available at t; step 3 needs no driver. Optionally (``clearness``, since
0.14.0, off in the pipeline by default) steps 1 and 2 also require a similar
clearness index, Rg over top-of-atmosphere radiation (:func:`clearness_index`). Widening stops at the largest
K <= ``max_window_days`` (default 140 days: the flow chart widens the driver steps
to ±140 days; it gives the diurnal course no end, and we stop it there too); a
pass whose K exceeds it is skipped, and rounds stop once the diurnal window covers
the whole record. A pass fills a gap only where it finds at least ``min_donors``
records (default 3, our choice, see :func:`fill_marginal`).

Last resort (since 0.19.0). A gap that no pass of the sequence fills takes the mean
diurnal course at doubled windows (±2K, ±4K, ... days after the sequence's largest K)
until the window covers the whole record: the flow chart gives the diurnal course no
end, and without a fill the gap makes every sum it enters NaN. A night gap still
unfilled then takes the night records of any hour within ±14, 28, 56, ... days,
labelled as the radiation step (a night gap's Rg is zero, sun below the horizon, and
night NEE is respiration, with no light-driven course through the night): this is
for the hours that are night only in a season without measured nights (e.g. 07:00
in a winter whose nights are all missing). Both are quality C; a gap with fewer than
``min_donors`` records even then stays NaN with method -1. Neither pass runs where
the sequence fills every gap, so such records are unchanged, and neither fills a
driver (:func:`fill_drivers`): a temperature taken from another season would pass
unseen into the modelled fluxes, so a driver gap beyond every window stays NaN.

Donors. By default night gaps are filled only from night records and day gaps
only from day records: each class runs the whole sequence on its own records
(Falge et al. 2001 fill day and night separately). Under the single rule of the
paper (``donors="similar_conditions_only"``) a night gap at Rg = 0 takes every
record with Rg <= 50 W m-2, twilight included, where photosynthesis is already
under way: that biases filled night NEE, and annual NEE, low. The night class (Rg below
10 W m-2) still holds twilight records with the sun up; given ``sun_up`` (the pipeline
passes it under ``gapfill_donors = "dark_first"``), a night gap with the sun below the horizon takes night records with the sun
below the horizon first, in the passes of quality A and B (:func:`_dark_first`).

One exception (since 0.14.0): the diurnal course of a *day* gap takes the measured
records of both classes. Its window is symmetric in time (±1 h, ±K days), so around
sunrise and sunset it reaches as far into darker records as into brighter ones;
keeping only day records cut off the darker side, and a dawn or dusk gap in a
week-long outage took up CO2 where the ecosystem was still respiring. Night gaps keep
night records only: every night record is respiration, whatever its clock time. The
diurnal course's fill is the mean over its time-of-day offsets of each offset's mean
over the days, so that an offset measured more often (day records, where the u*
filter has removed many night records) does not pull the mean towards its side of
the hour; where every offset is measured equally often this is the plain mean of the
paper. On 40 generated site-years with a 14–21-day outage of every sensor the two
changes moved the mean annual NEE error from -5.0 to -3.3 g C m-2 (DEVELOPERS.md).

Radiation window. With separate donors, a day gap whose ±50 W m-2 window would reach
below the lowest Rg of a day record (the night threshold) takes a window centred on its
own Rg instead (``rg_window="centred"``, the default since 0.8.0; see
:func:`centred_rg_tolerance`): otherwise dawn and dusk gaps are filled from brighter
records and take up too much CO2. ``rg_window="fixed"`` keeps ±50 W m-2 for every gap.

Time windows are measured in time, not in record counts: ±K days around t is every
record within K·(records per day) records of t, and the diurnal course at ±1 h
takes the records within ±2 records (30-min data) or ±1 record (60-min data) of
t + d days, |d| <= K. Windows cross midnight and year boundaries.

Reported window size ``window_days`` is the *full* width of the time window
[days]: 2K for steps 1 and 2 (±K days around t), 2K + 1 for step 3 (the day of t
and K days on either side). Quality class (flow chart): A for step 1 up to ±14
days and step 3 on the same day; B for step 2 at ±7 days and step 3 at ±1 day;
C for every widened window (m). Driver gaps of a few hours are interpolated
(:func:`fill_drivers`) and carry their own class, ``"interpolated"``; the labels
of all classes are in :data:`QUALITY_NAMES`.

"Within ±tolerance" is inclusive and evaluated as ``x(t) - tol <= x <= x(t) + tol``
with the bounds in float64. The fill is the mean of the records found (for the
diurnal course, the mean of the offsets' means, see Donors); ``std`` is their
population standard deviation (ddof = 0, so 0 for a single record).

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

Falge, E., Baldocchi, D., Olson, R., et al. (2001). Gap filling strategies for
defensible annual sums of net ecosystem exchange. Agricultural and Forest
Meteorology 107, 43–69.

Moffat, A. M., Papale, D., Reichstein, M., et al. (2007). Comprehensive comparison of
gap-filling techniques for eddy covariance net carbon fluxes. Agricultural and Forest
Meteorology 147, 209–232. doi:10.1016/j.agrformet.2007.08.011
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ._validate import float_copy
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
    "DONOR_RULES",
    "ESTIMATES",
    "METHOD_ALL_DRIVERS",
    "METHOD_DIURNAL_COURSE",
    "METHOD_INTERPOLATED",
    "METHOD_MEASURED",
    "METHOD_RADIATION",
    "METHOD_UNFILLED",
    "QUALITY_A",
    "QUALITY_A_WINDOW_DAYS",
    "QUALITY_B",
    "QUALITY_C",
    "QUALITY_INTERPOLATED",
    "QUALITY_MEASURED",
    "QUALITY_NAMES",
    "QUALITY_UNFILLED",
    "crossed_event_notes",
    "driver_conditions",
    "event_breaks",
    "event_notes",
    "fill_drivers",
    "fill_frame",
    "fill_marginal",
    "fill_marginal_values",
    "local_linear_correction",
    "pass_sequence",
    "quality_class",
]

#: Method codes of the ``method`` column.
METHOD_UNFILLED = -1
METHOD_MEASURED = 0
METHOD_ALL_DRIVERS = 1
METHOD_RADIATION = 2
METHOD_DIURNAL_COURSE = 3
METHOD_INTERPOLATED = 4

#: Quality codes of the ``quality`` columns (int8).
QUALITY_UNFILLED = -1
QUALITY_MEASURED = 0
QUALITY_A = 1
QUALITY_B = 2
QUALITY_C = 3
QUALITY_INTERPOLATED = 4

#: Label of every quality code, for tables that show the quality as text.
#: ``"interpolated"`` occurs only in the driver columns (short driver gaps).
QUALITY_NAMES: dict[int, str] = {
    QUALITY_UNFILLED: "unfilled",
    QUALITY_MEASURED: "measured",
    QUALITY_A: "A",
    QUALITY_B: "B",
    QUALITY_C: "C",
    QUALITY_INTERPOLATED: "interpolated",
}

#: Donor rules: which measured records may fill a gap.
DONOR_RULES = ("separate_day_night", "similar_conditions_only")

#: Radiation windows of the similarity steps: ``"centred"`` keeps a day gap's window
#: centred on its own Rg where the fixed tolerance would reach below the lowest Rg a
#: day record has; ``"fixed"`` is ±tolerance everywhere, as published.
RG_WINDOWS = ("centred", "fixed")

#: Largest full window [days] of quality A: the all-driver step up to ±14 days and
#: the diurnal course on the same day; of quality B: the radiation-only step at ±7
#: days and the diurnal course at ±1 day. Reichstein, gap-filling flow chart,
#: workshop slides 2004. Every wider window is C (the flow chart's widening loop (m)).
_A_ALL_DRIVERS_DAYS, _A_DIURNAL_DAYS = 28.0, 1.0
_B_RADIATION_DAYS, _B_DIURNAL_DAYS = 14.0, 3.0
#: The largest window [days] of quality A, for other modules (preflight names gaps wider).
QUALITY_A_WINDOW_DAYS = _A_ALL_DRIVERS_DAYS

#: Defaults: Reichstein et al. (2005), appendix.
_RG_TOLERANCE = 50.0  # [W m-2]
#: Rg below which a measured record is night [W m-2], as solar.night_mask's default.
_NIGHT_RG_THRESHOLD = 10.0
_TAIR_TOLERANCE = 2.5  # [°C]
_VPD_TOLERANCE = 5.0  # [hPa]
#: Similar clearness index within ± this [1] (our choice; see clearness_index).
_CLEARNESS_TOLERANCE = 0.15
#: Top-of-atmosphere irradiance below which the clearness index is set to 0 [W m-2]:
#: with the sun a few degrees up, Rg / potential is dominated by noise, refraction and
#: the horizon (our choice: 20 W m-2, the sun about 1° above the horizon).
_CLEARNESS_MIN_POTENTIAL = 20.0
#: Largest half-width of any window [days]: the driver steps widen up to ±140 days,
#: Reichstein, gap-filling flow chart, workshop slides 2004; the flow chart gives the
#: diurnal course no end, we stop it at the same ±140 days (our choice).
_MAX_WINDOW_DAYS = 140.0
#: Fewest measured records a pass must find to fill a gap; our choice (see
#: :func:`fill_marginal`).
_MIN_DONORS = 3
# ridge of the local-linear correction [tolerance units squared per donor]; see
# local_linear_correction
_SLOPE_RIDGE = 0.01
# the local-linear slopes are fitted on the records within this many tolerances of the
# gap (same time window); see local_linear_correction
_SLOPE_TOLERANCES = 3.0
ESTIMATES = ("local_linear", "donor_mean")

# the drivers' column of the preceding day's light, a regressor of the night fills where
# given (fluxpart.preceding_light.COLUMN); its tolerance is that of Rg
NIGHT_LIGHT_COLUMN = "rg_day_before"
# Tair and VPD correct the radiation step's fills only within windows of ±7 days (the
# flow chart's quality B): within a week the canopy is the same, across months a slope
# on temperature carries the season's change of the canopy
_REGRESSOR_DAYS = 7
#: Longest driver gap filled by linear interpolation [hours]; our choice (see
#: :func:`fill_drivers`).
_INTERPOLATION_HOURS = 3.0
#: Drivers filled by linear interpolation across short gaps.
_INTERPOLATED_DRIVERS = ("tair", "vpd", "tsoil")
#: Half-width of the time-of-day window of the diurnal course [minutes]; the paper: ±1 h.
_DIURNAL_HALF_WIDTH_MINUTES = 60
#: Increment of the widened rounds [days]; Reichstein, gap-filling flow chart,
#: workshop slides 2004.
_WIDENING_STEP_DAYS = 7
#: First half-width of the last-resort fill of night gaps from night records of any
#: hour [days]: past the B class's ±7 days of the radiation step, so its fills are C.
_LAST_RESORT_NIGHT_DAYS = 14
#: Upper bound on the elements of any (gaps × window records) temporary.
_MAX_BLOCK_ELEMENTS = 1 << 20
# Slope records of the blocks of a pass whose local-linear corrections are computed in
# one call (the arithmetic is per gap, so the batching changes no bit; it saves the
# per-call overhead of NumPy on small blocks). 2**15 records: 256 KiB per float64
# array, so the call's ~8 slope-record temporaries (~2 MiB) stay in a core's L2 cache
# (1-2 MiB on current x86 server cores) instead of streaming from memory, as 2**18 did
# (2 MiB each): the 16 fills of a demo run 4-10 % less CPU (round speed18)
_CORRECTION_BATCH_RECORDS = 1 << 15
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
    array = float_copy(values, name)
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

    Raises
    ------
    ConfigError
        If `max_window_days` is negative or not a number, or infinite while
        `record_days` is too.

    Notes
    -----
    Step 1 at ±7 and ±14 days, step 2 at ±7, step 3 on the same day (±0) and at
    ±1 day, then rounds r = 1, 2, ... of step 1 at ±(14 + 7r), step 2 at
    ±(7 + 7r) and step 3 at ±7r (Reichstein, gap-filling flow chart, workshop
    slides 2004: the driver steps widen "|dt| <= 21, 28, ..., 140 days", the
    diurnal course at ±1 h on the same day, ±1 day, then ±7, 14, ... days). A
    pass with a half-width above ``max_window_days`` is left out.

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    limit = _check_setting("max_window_days", max_window_days, allow_zero=True, allow_inf=True)
    passes = []
    if all_drivers:
        passes += [(METHOD_ALL_DRIVERS, 7), (METHOD_ALL_DRIVERS, 14)]
    if radiation:
        passes.append((METHOD_RADIATION, 7))
    passes += [(METHOD_DIURNAL_COURSE, k) for k in (0, 1)]
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
        course, 4 linear interpolation (drivers only), -1 unfilled.
    window_days : array_like of float
        Full width of the time window [days] (2K for steps 1–2, 2K + 1 for step 3).

    Returns
    -------
    numpy.ndarray of int8
        0 measured, 1 A, 2 B, 3 C, 4 interpolated, -1 unfilled (labels in
        :data:`QUALITY_NAMES`).

    Notes
    -----
    A: step 1 (all drivers) up to ±14 days (full window <= 28 days) and step 3
    on the same day (full window 1 day); B: step 2 (Rg only) at ±7 days (14
    days) and step 3 at ±1 day (3 days); C: every wider window. Reichstein,
    gap-filling flow chart, workshop slides 2004 ("Rg, T, VPD available with
    |dt| <= 14 days ... f_qc = 1", "Rg available with |dt| <= 7 days ... f_qc =
    2"); the diurnal classes and C for the widened steps (m).

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    method = np.asarray(method)
    window = np.asarray(window_days, dtype=np.float64)
    diurnal = method == METHOD_DIURNAL_COURSE
    quality = np.full(method.shape, QUALITY_C, dtype=np.int8)
    quality[((method == METHOD_RADIATION) & (window <= _B_RADIATION_DAYS))
            | (diurnal & (window <= _B_DIURNAL_DAYS))] = QUALITY_B
    quality[((method == METHOD_ALL_DRIVERS) & (window <= _A_ALL_DRIVERS_DAYS))
            | (diurnal & (window <= _A_DIURNAL_DAYS))] = QUALITY_A
    quality[method == METHOD_MEASURED] = QUALITY_MEASURED
    quality[method == METHOD_INTERPOLATED] = QUALITY_INTERPOLATED
    quality[method == METHOD_UNFILLED] = QUALITY_UNFILLED
    return quality


def _full_width_days(step: int, half_width_days: int) -> float:
    if step == METHOD_DIURNAL_COURSE:
        return 2.0 * half_width_days + 1.0
    return 2.0 * half_width_days


# --------------------------------------------------------------------------- kernels

def _ranked(window):
    """Integer ranks of ``window`` and its sorted values.

    The rank dtype is the smallest that holds ``window.size``, the largest bound
    ``searchsorted`` can return (a dtype holding only the ranks 0 .. size - 1
    wraps that bound to 0 when the size is a power of 2 such as 256).
    """
    order = np.argsort(window)
    rank = np.empty(window.size, dtype=np.min_scalar_type(window.size))
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
    every pass of the step. Where every window of the step lies within ``span``
    (start, stop) of usable positions, at most 2S long, one table ranks that span
    instead: any set containing the window gives the same decisions. ``usable``:
    the record numbers of the usable records (:meth:`taken`).
    """

    _SEGMENT = 32767

    def __init__(self, usable, usable_drivers, span=None):
        self.usable = usable
        self._drivers = usable_drivers
        self._tables = {}
        self._span = span
        self._taken = {}
        self._stacked = {}

    def taken(self, array):
        """``array[usable]`` of a record array of the step (the target, a driver), taken
        once per step instead of once per pass (the same values)."""
        key = id(array)
        if key not in self._taken:     # the array is kept, so its id stays its own
            self._taken[key] = (array, array[self.usable])
        return self._taken[key][1]

    def stacked(self, arrays):
        """The :meth:`taken` values of `arrays` as the rows of one array (arrays ×
        usable records), stacked once per step and set of arrays instead of once per
        pass (the same values)."""
        key = tuple(id(array) for array in arrays)
        if key not in self._stacked:    # the arrays are kept by `taken`, their ids their own
            self._stacked[key] = np.stack([self.taken(array) for array in arrays])
        return self._stacked[key]

    def table_key(self, p, q):
        """Key of the table that ranks the window of usable positions [p, q): ``"span"``
        where the span holds it, None where it is wider than a segment (ranked on its
        own), else its segment's number."""
        span = self._span
        if span is not None and span[0] <= p and q <= span[1]:
            # every window of the step lies in one span of usable positions: one table
            # ranks just that span (a few long gaps need a few thousand records ranked,
            # not segments of 65,534)
            return "span"
        if q - p > self._SEGMENT:
            return None
        return p // self._SEGMENT

    def table(self, key):
        """(tables, offset) of :meth:`table_key`'s `key` (not None), built when first asked."""
        if key == "span":
            start, stop = self._span
        else:
            start, stop = key * self._SEGMENT, (key + 2) * self._SEGMENT
        if key not in self._tables:
            self._tables[key] = [_ranked(driver[start:stop]) for driver in self._drivers]
        return self._tables[key], start

    def bounds(self, key, lower, upper):
        """(ranks, low, high) per driver, and the offset, of the table `key`: a key of
        :meth:`table_key` other than None, or the ``(tables, offset)`` of a window ranked
        on its own. The table's ranks and those of the bounds `lower`, `upper` (one per
        gap): keys of :func:`_similar_runs` once the ranks are sliced to a window."""
        tables, offset = self.table(key) if not isinstance(key, tuple) else key
        return [(rank, np.searchsorted(ordered, low, side="left").astype(rank.dtype),
                 np.searchsorted(ordered, high, side="right").astype(rank.dtype))
                for (rank, ordered), low, high in zip(tables, lower, upper,
                                                      strict=True)], offset

    def keys(self, p, q, lower, upper):
        """(rank key, low, high) per driver for the window of usable positions [p, q)."""
        key = self.table_key(p, q)
        if key is None:    # a window wider than a segment: ranked on its own
            key = ([_ranked(driver[p:q]) for driver in self._drivers], p)
        bounds, offset = self.bounds(key, lower, upper)
        return [(rank[p - offset:q - offset], low, high) for rank, low, high in bounds]


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


def _similar_conditions_pass(values, usable, gaps, half_width, conditions, tables,
                             local_linear=False, regressors=()):
    """Mean, count and std of usable records similar to each gap within ±half_width.

    ``usable`` are the sorted record numbers of measured target records whose
    condition drivers are all available; ``conditions`` are (driver, tolerance)
    pairs; ``half_width`` is in records; ``tables`` are the step's
    :class:`_RankTables`. Record j is similar to gap i when ``x[i] - tolerance
    <= x[j] <= x[i] + tolerance`` for every driver x (bounds in float64) and
    ``|j - i| <= half_width``. With ``local_linear`` the mean is moved by
    :func:`local_linear_correction` for the donors' driver offset from the gap, on the
    condition drivers and on the (driver, tolerance) pairs of ``regressors``, drivers
    that do not choose the donors (NaN allowed).
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
    usable_values = tables.taken(values)
    slope_drivers = [*conditions, *regressors] if local_linear else []
    # the slope drivers at the usable records, one row each
    usable_drivers = (tables.stacked([driver for driver, _ in slope_drivers])
                      if slope_drivers else None)
    lowers = [driver[gaps] - _at(tolerance, gaps) for driver, tolerance in conditions]
    uppers = [driver[gaps] + _at(tolerance, gaps) for driver, tolerance in conditions]
    # bounds of the local-linear slope records
    wide_lowers = [driver[gaps] - _SLOPE_TOLERANCES * _at(tolerance, gaps)
                   for driver, tolerance in conditions] if local_linear else []
    wide_uppers = [driver[gaps] + _SLOPE_TOLERANCES * _at(tolerance, gaps)
                   for driver, tolerance in conditions] if local_linear else []
    # Blocks waiting for their donors' statistics (and local-linear corrections),
    # computed in one call per _CORRECTION_BATCH_RECORDS donor (slope) records: (rows,
    # donors, donor counts[, slope records, slope counts]), records as positions in
    # ``usable``.
    pending, pending_records = [], 0

    # The bounds' ranks of the gaps of every run of blocks ranked by one table, at once
    # (a pass of a site-year: one run), not block by block
    block_tables = [tables.table_key(p, q) for p, q in zip(time_low[starts],
                                                            time_high[ends - 1], strict=True)]
    group_end = -1

    def group_bounds(first):
        """(first gap, last block, offset, narrow and wide bounds) of the run of blocks
        sharing block `first`'s table."""
        last = first
        while last + 1 < len(block_tables) and block_tables[last + 1] == block_tables[first]:
            last += 1
        g0, g1 = starts[first], ends[last]
        narrow, offset = tables.bounds(block_tables[first], [x[g0:g1] for x in lowers],
                                       [x[g0:g1] for x in uppers])
        wide = tables.bounds(block_tables[first], [x[g0:g1] for x in wide_lowers],
                             [x[g0:g1] for x in wide_uppers])[0] if local_linear else []
        return g0, last, offset, narrow, wide

    def add_statistics(blocks):
        """Mean (moved by its local-linear correction), count and spread of the donors of
        the gaps of `blocks`, each gap's one run: the sums of each run on its own, so the
        blocks joined end to end get the bits of a call per block, in fewer NumPy calls
        (round speed58)."""
        rows, donors, donor_counts, *slopes = (np.concatenate(parts)
                                               for parts in zip(*blocks, strict=True))
        picked = usable_values[donors]
        run_starts = np.cumsum(donor_counts) - donor_counts
        found_mean = np.add.reduceat(picked, run_starts) / donor_counts
        residual = picked - np.repeat(found_mean, donor_counts)
        count[rows] = donor_counts
        spread[rows] = np.sqrt(np.add.reduceat(residual * residual, run_starts) / donor_counts)
        if slopes:
            found_mean += _corrections_of_runs(usable_values, usable_drivers, slope_drivers,
                                               gaps[rows], donors, donor_counts, *slopes)
        mean[rows] = found_mean

    for number, (a, b) in enumerate(zip(starts, ends, strict=True)):
        p, q = time_low[a], time_high[b - 1]
        if p == q:
            continue
        n_rows, width = b - a, q - p
        position = np.arange(width, dtype=np.min_scalar_type(width))
        keys = [(position, (time_low[a:b] - p).astype(position.dtype),
                 (time_high[a:b] - p).astype(position.dtype))]
        grouped = block_tables[number] is not None
        if not grouped:
            keys += tables.keys(p, q, [x[a:b] for x in lowers], [x[a:b] for x in uppers])
        else:
            if number > group_end:
                g0, group_end, offset, narrow, wide = group_bounds(number)
            keys += [(rank[p - offset:q - offset], low[a - g0:b - g0], high[a - g0:b - g0])
                     for rank, low, high in narrow]
        column, n_similar = _similar_runs(keys, n_rows, width)
        if column.size == 0:
            continue
        found = n_similar > 0
        n_found = n_similar[found]
        rows = np.flatnonzero(found) + a
        if not local_linear:
            pending.append((rows, p + column, n_found))
            pending_records += column.size
        else:
            # the slope records of the gaps with donors: the same window, wider bounds
            if not grouped:
                wide_keys = tables.keys(p, q, [x[a:b] for x in wide_lowers],
                                        [x[a:b] for x in wide_uppers])
            else:
                wide_keys = [(rank[p - offset:q - offset], low[a - g0:b - g0],
                              high[a - g0:b - g0]) for rank, low, high in wide]
            wide_keys = [(key, low[found], high[found]) for key, low, high in keys[:1] + wide_keys]
            column_w, n_w = _similar_runs(wide_keys, n_found.size, width)
            pending.append((rows, p + column, n_found, p + column_w, n_w))
            pending_records += column_w.size
        if pending_records >= _CORRECTION_BATCH_RECORDS:
            add_statistics(pending)
            pending, pending_records = [], 0
    if pending:
        add_statistics(pending)
    return mean, count, spread


def _corrections_of_runs(usable_values, usable_drivers, slope_drivers, gaps, donors,
                         donor_counts, slopes, slope_counts) -> np.ndarray:
    """:func:`local_linear_correction` of `gaps` from their donors and slope records.

    ``usable_values`` and ``usable_drivers`` are the target and the slope drivers at the
    usable records, the drivers as rows of one array (drivers × usable records);
    ``slope_drivers`` the (driver, tolerance) pairs over all records; ``donors`` and
    ``slopes`` positions in the usable records, each gap's one run (``donor_counts``,
    ``slope_counts`` records per gap). Every quantity is a sum over one gap's own run or an
    element-wise operation, so the gaps of several blocks joined end to end get the bits
    of a call per block.
    """
    k = usable_drivers.shape[0]
    slope_starts = np.cumsum(slope_counts) - slope_counts
    picked = usable_values[slopes]
    # the drivers at the slope records and, in the last row, the residual: one array
    # (_local_linear works on its rows in place)
    rows = np.empty((k + 1, slopes.size))
    # positions within the usable records: "clip" skips the bounds check of "raise"
    # (a third of the gather's time), the same values (round speed58)
    np.take(usable_drivers, slopes, axis=1, out=rows[:k], mode="clip")
    np.subtract(picked, np.repeat(np.add.reduceat(picked, slope_starts) / slope_counts,
                                  slope_counts), out=rows[k])
    donor_starts = np.cumsum(donor_counts) - donor_counts
    with np.errstate(all="ignore"):
        return _local_linear(
            rows, [driver[gaps] for driver, _ in slope_drivers],
            [_at(tolerance, gaps) for _, tolerance in slope_drivers], slope_starts,
            slope_counts, _run_means(np.take(usable_drivers, donors, axis=1, mode="clip"),
                                     donor_starts, donor_counts))


def _run_means(x, run_starts, counts=None, missing=None):
    """Mean of each run of `x` along its last axis (runs start at `run_starts`; `counts`:
    their lengths, if known), NaN values left out (`missing`: ``np.isnan(x)``, if known)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        # every value present (the minimum of values with a NaN is NaN: one pass, no
        # mask): the same sums over the same counts
        if counts is not None and (not x.size or not np.isnan(x.min())):
            return np.add.reduceat(x, run_starts, axis=-1) / counts
        missing = np.isnan(x) if missing is None else missing
        if counts is None or x.ndim != 2:
            present = ~missing
            return (np.add.reduceat(np.where(present, x, 0.0), run_starts, axis=-1)
                    / np.add.reduceat(present, run_starts, axis=-1))
        # rows (drivers) with a NaN apart, each on its own: a row without one has the
        # same sums over the same counts (round speed58)
        means = np.add.reduceat(x, run_starts, axis=-1) / counts
        for row in np.flatnonzero(missing.any(axis=-1)):
            present = ~missing[row]
            means[row] = (np.add.reduceat(np.where(present, x[row], 0.0), run_starts)
                          / np.add.reduceat(present, run_starts))
        return means


def _similar_runs(keys, n_rows, width):
    """Columns of the records within every (key, low, high) bound of each row, row by row,
    and each row's count: ``low[i] <= key[j] < high[i]`` for all keys (one at least)."""
    # the first key written straight into the matrix: no pass over a matrix of ones
    (key, low, high), *others = keys
    similar = np.greater_equal(key[None, :], low[:, None])
    scratch = np.less(key[None, :], high[:, None])
    similar &= scratch
    for key, low, high in others:
        similar &= np.greater_equal(key[None, :], low[:, None], out=scratch)
        similar &= np.less(key[None, :], high[:, None], out=scratch)
    # Similar pairs in row-major order: each row's records are one run.
    flat = np.flatnonzero(similar)
    counts = np.diff(np.searchsorted(flat, np.arange(n_rows + 1) * width))
    return flat - np.repeat(np.arange(n_rows) * width, counts), counts


def local_linear_correction(residual, donor_drivers, gap_drivers, tolerances, run_starts,
                            counts, reference_means=None) -> np.ndarray:
    """Correction of each gap's donor mean for its donors' mean driver offset [flux units].

    Parameters
    ----------
    residual : numpy.ndarray
        Each slope record's value minus the mean of its gap's slope records, the
        records of all gaps in one array, each gap's records one run [flux units,
        e.g. µmol m-2 s-1].
    donor_drivers : list of numpy.ndarray
        Per condition driver (Rg [W m-2], Tair [°C], VPD [hPa], ...), its value at
        each slope record, aligned with `residual`.
    gap_drivers : list of numpy.ndarray
        Per condition driver, its value at each gap (one per run).
    tolerances : list of float or numpy.ndarray
        Per condition driver, its similarity tolerance at each gap (scalar or one per
        run) [driver units], > 0.
    run_starts : numpy.ndarray
        Position in `residual` of each gap's first slope record.
    counts : numpy.ndarray
        Slope records per gap (>= 1).
    reference_means : list of numpy.ndarray, optional
        Per condition driver, the mean of each gap's donors (the records averaged
        for its fill); None: the slope records are the donors.

    Returns
    -------
    numpy.ndarray
        Per gap, ``c · c² / (c² + v)``: ``c = b · (x_gap − x̄_donors)`` with ``b`` the
        slopes of a ridge least-squares fit of the slope records' values on their
        drivers (each driver in units of its tolerance, ridge ``0.01 × records`` on
        the diagonal), and ``v`` the variance of ``c`` from the records' scatter.

    Notes
    -----
    A donor mean is a local-constant estimate: where a gap sits at the edge of its
    donors' conditions (the hottest, driest afternoons of the window lost by an
    analyser failing in heat, the warm end of a spring fortnight), the donors lie on
    average on one side of it and the mean is biased by the flux's slope times the
    offset. A local-linear estimate removes that first-order boundary bias (Fan &
    Gijbels 1996; Ruppert & Wand 1994). The donors stay those of the published
    method and the correction is at most the slope across one tolerance, since the
    donors' drivers lie within the tolerances of the gap's. The slope, a derivative,
    is fitted on a wider set than the level (local polynomial practice: a derivative
    needs a larger bandwidth than the function, Fan & Gijbels 1996): the records of
    the same time window within 3 tolerances of the gap (±7.5 K, ±15 hPa, ±150 W m-2
    by default), where the donors alone (a few tens of records spread over a fraction
    of a tolerance) gave slopes too noisy to use. The radiation-only step (donors of
    similar Rg whatever their temperature, for gaps without a record of similar
    temperature and VPD near them, such as a heat wave) also regresses on Tair and
    VPD within its ±7-day windows (quality B): drivers that do not choose its donors,
    each missing value counted at its records' mean; over wider windows a slope on
    temperature would carry the season's change of the canopy (on the ninth trial's
    91-day outage it moved NEE by +11 g C m-2). Two further choices keep its noise
    small, both ours: the ridge of 0.01 (in tolerance units) shrinks the slope of a
    driver that varies among the records by less than a tenth of its tolerance (the
    night's Rg) towards zero, and the correction is shrunk by its reliability
    ``c² / (c² + v)`` (an empirical-Bayes factor, Efron & Morris 1975 (m)), so a
    correction within its own noise is mostly dropped. Slope sets of 1, 2 and 3
    tolerances were measured on the generated benchmarks (DEVELOPERS.md, 0.21.0):
    3 lowered the RMS NEE error of all three sets and improved more site-years than
    it worsened in each (all-driver step; with the radiation step's regressors the
    calibration set's count turned to 9 better, 14 worse at an RMS of 5.94 against
    5.95).

    References
    ----------
    Fan, J., Gijbels, I. (1996). Local Polynomial Modelling and Its Applications.
    Chapman & Hall, London (m).

    Ruppert, D., Wand, M. P. (1994). Multivariate locally weighted least squares
    regression. The Annals of Statistics 22, 1346–1370 (m).

    Efron, B., Morris, C. (1975). Data analysis using Stein's estimator and its
    generalizations. Journal of the American Statistical Association 70, 311–319 (m).
    """
    rows = np.empty((len(donor_drivers) + 1, np.size(residual)))
    for row, x in zip(rows, [*donor_drivers, residual], strict=True):
        row[:] = x
    with np.errstate(all="ignore"):
        return _local_linear(rows, gap_drivers, tolerances, run_starts, counts,
                             reference_means)


def _local_linear(rows, gap_drivers, tolerances, run_starts, counts, reference_means):
    """:func:`local_linear_correction` of the drivers at the slope records, rows ``0 ..
    k - 1`` of `rows`, and their residual, its last row (overwritten: the drivers'
    deviations in tolerance units). Each row's element-wise operations and run sums are
    those of the row on its own (a run sum along a row of a C-ordered array has the bits
    of the row's own), in fewer NumPy calls."""
    n_gaps, k = counts.size, rows.shape[0] - 1
    drivers = rows[:k]
    offset = np.empty((n_gaps, k))
    missing = np.isnan(drivers)
    # a regressor missing at a record (NaN) sits at its records' mean: no leverage
    donor_means = _run_means(drivers, run_starts, counts, missing)
    drivers -= np.repeat(donor_means, counts, axis=1)
    for j, (at_gap, tolerance) in enumerate(zip(gap_drivers, tolerances, strict=True)):
        if missing[j].any():
            drivers[j][missing[j]] = 0.0
        if np.ndim(tolerance) == 0:
            drivers[j] /= float(tolerance)
        else:
            drivers[j] /= np.repeat(np.asarray(tolerance, dtype=float), counts)
        tolerance = np.broadcast_to(np.asarray(tolerance, dtype=float), (n_gaps,))
        reference = donor_means[j] if reference_means is None else reference_means[j]
        # ... and missing at the gap (or at every donor): no offset
        relative = (at_gap - reference) / tolerance
        offset[:, j] = np.where(np.isnan(relative), 0.0, relative)
    gram = np.empty((n_gaps, k, k))
    moment = np.empty((n_gaps, k))
    products = np.empty_like(rows)     # one buffer for the products of every row
    for i in range(k + 1):
        # row i times rows i .. k, summed over each run: gram row i, moment i; the last,
        # the residual's square
        sums = np.add.reduceat(np.multiply(rows[i], rows[i:], out=products[i:]), run_starts,
                               axis=1)
        if i < k:
            gram[:, i, i:] = gram[:, i:, i] = sums[:-1].T
            moment[:, i] = sums[-1]
    squares = sums[0]
    gram += _SLOPE_RIDGE * counts[:, None, None] * np.eye(k)
    # rows with a non-finite sum (an absurd driver value) get no slope, not a failed solve
    broken = ~(np.isfinite(gram).all(axis=(1, 2)) & np.isfinite(moment).all(axis=1)
               & np.isfinite(offset).all(axis=1))
    gram[broken], moment[broken], offset[broken] = np.eye(k), 0.0, 0.0
    # one solve for the slopes (moment) and the leverage of the offset
    solved = _solve_positive_definite(gram, np.stack([moment, offset], axis=2))
    correction, leverage = np.zeros(n_gaps), np.zeros(n_gaps)
    for j in range(k):
        correction += solved[:, j, 0] * offset[:, j]
        leverage += solved[:, j, 1] * offset[:, j]
    variance = squares / counts * leverage
    square = correction * correction
    total = square + variance
    kept = np.divide(correction * square, total, out=np.zeros(n_gaps),
                     where=(total > 0) & np.isfinite(total))
    # a driver of absurd size (the reader's checks aside) must not turn a fill into NaN
    return np.where(np.isfinite(kept), kept, 0.0)


def _solve_positive_definite(matrices, right):
    """Solve each ``matrices[i] @ x = right[i]`` (symmetric positive definite, k × k, k
    small) by Gaussian elimination without pivoting, in element-wise NumPy operations.

    Elimination without pivoting is stable for a symmetric positive definite matrix
    (Golub & Van Loan 2013, section 4.2 (m)); done in element-wise operations in a fixed
    order, it gives the same bits on every CPU, where a LAPACK solve takes the BLAS
    kernel's path (under another OpenBLAS kernel a tenth of a local-linear fill moved in
    its last bit). ``matrices`` (n, k, k), ``right`` (n, k, m); returns (n, k, m).
    """
    a = np.array(matrices, dtype=float)
    b = np.array(right, dtype=float)
    k = a.shape[1]
    for i in range(k - 1):
        # every row below i at once: each row's operations are those of its own step
        factor = a[:, i + 1:, i] / a[:, i, i, None]
        a[:, i + 1:, i:] -= factor[:, :, None] * a[:, i, None, i:]
        b[:, i + 1:, :] -= factor[:, :, None] * b[:, i, None, :]
    x = np.empty_like(b)
    for i in range(k - 1, -1, -1):
        total = b[:, i, :].copy()
        for j in range(i + 1, k):
            total -= a[:, i, j, None] * x[:, j, :]
        x[:, i, :] = total / a[:, i, i, None]
    return x


def _at(tolerance, gaps):
    """The tolerance of each gap: a scalar as it is, a per-record array at `gaps`."""
    return tolerance[gaps] if np.ndim(tolerance) else tolerance


def centred_rg_tolerance(rg, is_night, tolerance, night_threshold) -> np.ndarray:
    """Per-record Rg tolerance that keeps a day record's radiation window centred on it.

    Parameters
    ----------
    rg : array_like
        Global radiation of each record [W m-2] (NaN where unavailable).
    is_night : array_like of bool
        True for night records.
    tolerance : float
        The similarity tolerance of Rg [W m-2], e.g. 50 (Reichstein et al. 2005).
    night_threshold : float
        Rg below which a measured record is night [W m-2]
        (:func:`fluxpart.solar.night_mask`): the lowest Rg a day record has.

    Returns
    -------
    numpy.ndarray
        ``min(tolerance, max(Rg - night_threshold, night_threshold))`` for day
        records, `tolerance` for night records [W m-2].

    Notes
    -----
    Day gaps are filled from day records, whose Rg is at least `night_threshold`.
    A day gap at Rg = 20 W m-2 with the fixed ±50 W m-2 window takes records from
    10 to 70 W m-2: its donors sit on average at about twice its own light, on the
    steepest part of the light response, so dawn and dusk fills take up too much
    CO2 (on 12 generated site-years of :mod:`fluxpart.scenarios`, day gaps at Rg
    10–100 W m-2 were filled 0.003–0.008 µmol m-2 s-1 per record too negative on
    average, −1.5 g C m-2 a year). Shrinking the tolerance to the distance from
    the class's lower edge makes the window symmetric about the gap's own Rg, so a
    light response that is straight over the window is averaged without bias.
    The tolerance never falls below `night_threshold` itself: the radiation level
    the night mask already trusts Rg to resolve (pyranometer zero offsets are of
    that order, ISO 9060 (m)). Night gaps keep the fixed window (their donors
    are night records, with Rg near 0 on both sides).

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x
    """
    rg = np.asarray(rg, dtype=float)
    centred = np.minimum(tolerance, np.maximum(rg - night_threshold, night_threshold))
    centred = np.where(np.isnan(centred), tolerance, centred)
    return np.where(np.asarray(is_night, dtype=bool), float(tolerance), centred)


def _diurnal_course_pass(values, measured, gaps, half_width_days, per_day, diurnal_records):
    """Mean, count and std of measured records at the same time of day ±1 h, ±K days.

    The fill is the mean over the time-of-day offsets (-1 h ... +1 h) of each offset's
    mean over the days, so every offset that has a record weighs alike; ``count`` and
    ``std`` are over all the records found (population std about their plain mean).
    """
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
        by_offset = (rows.size, days.size, 2 * diurnal_records + 1)
        offset_count = np.count_nonzero(ok.reshape(by_offset), axis=1)
        offset_sum = picked.reshape(by_offset).sum(axis=1)
        offset_mean = np.divide(offset_sum, offset_count, out=np.zeros_like(offset_sum),
                                where=offset_count > 0)
        with np.errstate(invalid="ignore", divide="ignore"):
            chunk_mean = offset_mean.sum(axis=1) / np.count_nonzero(offset_count, axis=1)
            plain_mean = picked.sum(axis=1) / n_ok
            deviation = np.where(ok, picked - plain_mean[:, None], 0.0)
            chunk_spread = np.sqrt((deviation * deviation).sum(axis=1) / n_ok)
        mean[a:a + chunk] = chunk_mean
        count[a:a + chunk] = n_ok
        spread[a:a + chunk] = chunk_spread
    return mean, count, spread


def _fill_series(values, per_day, diurnal_records, *, all_conditions, radiation_conditions,
                 max_window_days, min_donors=1, is_night=None, interpolated=None, wanted=None,
                 last_resort=False, local_linear=False, radiation_regressors=(),
                 night_regressors=(), sun_up=None):
    """Run the pass sequence on one series; return the output columns as arrays.

    ``all_conditions`` are (driver, tolerance) pairs of step 1 or ``None``;
    ``radiation_conditions`` are the (driver, tolerance) pairs of step 2 (Rg, and the
    clearness index where given) or ``None``.
    A pass fills a gap only where it finds at least ``min_donors`` records. With
    ``is_night`` (bool per record), night gaps are filled from night records only
    and day gaps from day records only, except that the diurnal course of a day gap
    takes every measured record; ``None`` lets every record fill every gap.
    ``interpolated`` (bool per record, or ``None``) marks gaps already filled by
    interpolation: they keep their value and are never donors. ``wanted`` (bool per
    record, or ``None`` for all) limits the gaps filled; the others stay unfilled.
    ``last_resort`` runs the last-resort passes (module notes) on the gaps the
    sequence leaves: for a flux only, since a driver filled from another season
    would pass unseen into the modelled fluxes. ``local_linear`` moves the fills of
    the similarity steps by :func:`local_linear_correction`, those of step 2 also on
    the (driver, tolerance) pairs ``radiation_regressors`` (Tair and VPD, which do not
    choose its donors); with ``is_night``, the night class's fills also on the (driver,
    tolerance) pairs ``night_regressors`` (soil temperature), in step 1 and in step 2
    within ±7 days. With ``is_night`` and ``sun_up`` (bool per record: the sun above
    the horizon in the record), night gaps in darkness are first filled from night
    records in darkness, by the passes of quality A and B only (:func:`_dark_first`).
    """
    n = values.size
    measured = ~np.isnan(values)
    value = values.copy()
    method = np.where(measured, METHOD_MEASURED, METHOD_UNFILLED).astype(np.int8)
    window_days = np.where(measured, 0.0, np.nan)
    count = np.zeros(n, dtype=np.int64)
    spread = np.full(n, np.nan)
    if interpolated is not None:
        method[interpolated] = METHOD_INTERPOLATED
    gaps = (~measured) if interpolated is None else (~measured & ~interpolated)
    if wanted is not None:
        gaps &= wanted
    classes = [np.ones(n, dtype=bool)] if is_night is None else [is_night, ~is_night]
    passes = pass_sequence(all_drivers=all_conditions is not None,
                           radiation=radiation_conditions is not None,
                           max_window_days=max_window_days, record_days=n / per_day)
    def take(outputs):
        """Write each pass's fills into the output columns; return their masks."""
        written = []
        for filled, step, half_width_days, pass_mean, pass_count, pass_spread in outputs:
            value[filled] = pass_mean
            method[filled] = step
            window_days[filled] = _full_width_days(step, half_width_days)
            count[filled] = pass_count
            spread[filled] = pass_spread
            written.append(filled)
        return written

    # the diurnal course of a day gap takes night records too (see the module notes)
    course_classes = [False] if is_night is None else [False, True]
    if is_night is not None and sun_up is not None:
        dark = is_night & ~sun_up
        outputs = _fill_class(values, measured & dark, gaps & dark, _dark_first(passes),
                              per_day, diurnal_records, all_conditions, radiation_conditions,
                              min_donors, measured & dark, night_class=True,
                              local_linear=local_linear, radiation_regressors=radiation_regressors,
                              night_regressors=night_regressors)
        for filled in take(outputs):
            gaps[filled] = False
    for members, course_from_all in zip(classes, course_classes, strict=True):
        donors = measured & members
        remaining = gaps & members
        course_donors = measured if course_from_all else donors
        # a day gap with no day record measured can still take night records
        if not course_donors.any() or not remaining.any():
            continue
        outputs = _fill_class(values, donors, remaining, passes, per_day, diurnal_records,
                              all_conditions, radiation_conditions, min_donors, course_donors,
                              last_resort=last_resort,
                              night_class=is_night is not None and not course_from_all,
                              local_linear=local_linear,
                              radiation_regressors=radiation_regressors,
                              night_regressors=night_regressors
                              if is_night is not None and not course_from_all else ())
        take(outputs)
    return value, method, window_days, count, spread


def _fill_class(values, donors, remaining, passes, per_day, diurnal_records, all_conditions,
                radiation_conditions, min_donors, course_donors, last_resort=False,
                night_class=False, local_linear=False, radiation_regressors=(),
                night_regressors=()):
    """Fill the gaps ``remaining`` from the records ``donors``; yield each pass's fills.

    With ``last_resort``, gaps the sequence leaves take the two last-resort passes
    (module notes):
    the diurnal course widened to the whole record, then, for the night class only
    (``night_class``), the night records of any hour.
    """
    n = values.size
    remaining = remaining.copy()

    def _usable_and_available(step, conditions):
        usable = donors.copy()
        available = np.ones(n, dtype=bool)
        for driver, _ in conditions:
            finite = ~np.isnan(driver)
            usable &= finite
            available &= finite
        usable = np.flatnonzero(usable)
        return usable, available, _RankTables(
            usable, [driver[usable] for driver, _ in conditions],
            _step_span(usable, np.flatnonzero(remaining & available),
                       [k * per_day for s, k in passes if s == step]))

    step_inputs = {}
    if all_conditions is not None:
        step_inputs[METHOD_ALL_DRIVERS] = (all_conditions, *_usable_and_available(
            METHOD_ALL_DRIVERS, all_conditions))
    if radiation_conditions is not None:
        step_inputs[METHOD_RADIATION] = (radiation_conditions, *_usable_and_available(
            METHOD_RADIATION, radiation_conditions))
    outputs = []
    for step, half_width_days in passes:
        if step == METHOD_DIURNAL_COURSE:
            gaps = np.flatnonzero(remaining)
            result = _diurnal_course_pass(values, course_donors, gaps, half_width_days,
                                          per_day, diurnal_records)
        else:
            conditions, usable, available, tables = step_inputs[step]
            gaps = np.flatnonzero(remaining & available)
            nearby = half_width_days <= _REGRESSOR_DAYS
            regressors = [*(radiation_regressors if step == METHOD_RADIATION and nearby
                            else ()),
                          *(night_regressors if step == METHOD_ALL_DRIVERS or nearby else ())]
            result = _similar_conditions_pass(
                values, usable, gaps, half_width_days * per_day, conditions, tables,
                local_linear, regressors)
        _take(outputs, remaining, gaps, step, half_width_days, result, min_donors)
        if not remaining.any():
            break
    if last_resort and remaining.any():
        outputs += _widened_course(values, course_donors, remaining, passes, per_day,
                                   diurnal_records, min_donors)
    if last_resort and night_class and remaining.any():
        outputs += _nearby_nights(values, donors, remaining, per_day, min_donors)
    return outputs


def _dark_first(passes) -> list:
    """The passes of `passes` whose fills are of quality A or B (:func:`quality_class`).

    A night gap with the sun below the horizon takes these from the night records with
    the sun below the horizon only; what they leave, the whole night class fills. Night
    records are those below an Rg threshold (10 W m-2), so they include twilight records
    with the sun up, whose canopy already photosynthesises in the little light there is
    (Rg 10 W m-2 is about 20 µmol m-2 s-1 of PAR; times a quantum efficiency of 0.02-0.05,
    0.4-1 µmol m-2 s-1 of uptake, 10-30 % of a night's respiration): as donors of a dark
    gap they bias its fill, and night NEE, low. Falge et al. (2001) separate donors by
    day and night for this reason; darkness is its physical line. The dark donors are
    asked only within the windows of quality A and B, so that where darkness is rare
    (high latitudes near midsummer) a dark gap is not filled from another season's dark
    records but, as before, from the twilight of its own days.

    References
    ----------
    Falge, E., Baldocchi, D., Olson, R., et al. (2001). Gap filling strategies for
    defensible annual sums of net ecosystem exchange. Agricultural and Forest
    Meteorology 107, 43–69.

    Reichstein, M., gap-filling flow chart, workshop slides 2004 (the quality classes).
    """
    return [(step, half_width) for step, half_width in passes
            if quality_class([step], [_full_width_days(step, half_width)])[0]
            in (QUALITY_A, QUALITY_B)]


def _step_span(usable, gaps, half_widths):
    """The usable positions (start, stop) every window of a step's passes can reach: those
    of `gaps` (the step's first gaps; later passes fill a subset) at the widest of
    `half_widths` [records]; None where the span is longer than two rank segments (or the
    step has no pass or no gap): the segments of :class:`_RankTables` then serve."""
    if gaps.size == 0 or not half_widths:
        return None
    reach = max(half_widths)
    start = int(np.searchsorted(usable, gaps[0] - reach, side="left"))
    stop = int(np.searchsorted(usable, gaps[-1] + reach, side="right"))
    return (start, stop) if stop - start <= 2 * _RankTables._SEGMENT else None


def _take(outputs, remaining, gaps, step, half_width_days, result, min_donors) -> None:
    """Keep a pass's fills of `gaps` with at least `min_donors` records: append them to
    `outputs` and mark them filled in `remaining` (both modified in place)."""
    pass_mean, pass_count, pass_spread = result
    found = pass_count >= min_donors
    filled = gaps[found]
    outputs.append((filled, step, half_width_days, pass_mean[found], pass_count[found],
                    pass_spread[found]))
    remaining[filled] = False


def _widened_course(values, course_donors, remaining, passes, per_day, diurnal_records,
                    min_donors):
    """Last resort: the diurnal course at doubled windows up to the whole record.

    For gaps that no pass of the sequence filled: the flow chart widens the mean
    diurnal course without end, so it goes on past the sequence's largest window,
    doubling the half-width each pass (a record of ten years needs at most five more
    passes) until the window covers the record.
    """
    record_days = values.size / per_day
    widest = max((k for step, k in passes if step == METHOD_DIURNAL_COURSE), default=0)
    half_width = max(widest, _WIDENING_STEP_DAYS)
    outputs = []
    while remaining.any() and widest < record_days:
        half_width = widest = int(min(2 * half_width, np.ceil(record_days)))
        gaps = np.flatnonzero(remaining)
        _take(outputs, remaining, gaps, METHOD_DIURNAL_COURSE, half_width,
              _diurnal_course_pass(values, course_donors, gaps, half_width, per_day,
                                   diurnal_records), min_donors)
    return outputs


def _nearby_nights(values, donors, remaining, per_day, min_donors):
    """Last resort for night gaps: the night records of any hour within ±K days.

    A night gap's global radiation is zero (the sun is below the horizon), so this is
    the radiation-only step with the gap's Rg known without a sensor, and night NEE,
    being respiration, has no light-driven course through the night. Half-widths 14,
    28, 56, ... days up to the whole record, so the fills are quality C.
    """
    n = values.size
    positions = np.flatnonzero(donors)
    outputs = []
    half_width = _LAST_RESORT_NIGHT_DAYS
    while remaining.any() and positions.size:
        gaps = np.flatnonzero(remaining)
        reach = int(half_width * per_day)
        lower = np.searchsorted(positions, gaps - reach, side="left")
        upper = np.searchsorted(positions, gaps + reach, side="right")
        count = upper - lower
        mean = np.full(gaps.size, np.nan)
        spread = np.full(gaps.size, np.nan)
        # a loop over the few gaps no other pass could fill (0.03 s on ten years)
        for i in np.flatnonzero(count >= min_donors):
            picked = values[positions[lower[i]:upper[i]]]
            mean[i], spread[i] = picked.mean(), picked.std()
        _take(outputs, remaining, gaps, METHOD_RADIATION, half_width, (mean, count, spread),
              min_donors)
        if half_width * per_day >= n:
            break
        half_width *= 2
    return outputs


def _short_gaps(values, max_records):
    """Mask of missing records in runs of at most ``max_records`` with values on both sides."""
    missing = np.isnan(values)
    if max_records < 1 or not missing.any():
        return np.zeros(values.size, dtype=bool)
    edges = np.diff(np.r_[0, missing.astype(np.int8), 0])
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    inside = (starts > 0) & (ends < values.size) & (ends - starts <= max_records)
    mask = np.zeros(values.size + 1, dtype=np.int64)
    np.add.at(mask, starts[inside], 1)
    np.add.at(mask, ends[inside], -1)
    return np.cumsum(mask[:-1]) > 0


def _interpolate(values, short):
    """Linear interpolation in record number across the gaps marked ``short``."""
    out = values.copy()
    if short.any():
        known = np.flatnonzero(~np.isnan(values))
        out[short] = np.interp(np.flatnonzero(short), known, values[known])
    return out


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

def _check_donors(donors, is_night, index) -> np.ndarray | None:
    """The night mask to separate donors by, or None for the single rule."""
    if donors not in DONOR_RULES:
        raise ConfigError(f"[processing] gapfill_donors = {donors!r}: expected one of "
                          f"{', '.join(repr(rule) for rule in DONOR_RULES)}")
    if donors == "similar_conditions_only":
        return None
    if is_night is None:
        raise FluxpartError("is_night: gapfill_donors = 'separate_day_night' needs the night "
                            "mask (one bool per record); pass is_night, or choose "
                            "donors='similar_conditions_only'")
    mask = np.asarray(is_night)
    if mask.dtype != bool:
        raise FluxpartError(f"is_night: expected booleans, found dtype {mask.dtype}")
    if mask.shape != (len(index),):
        raise LengthMismatchError(f"is_night: {mask.size} values for {len(index)} timestamps; "
                                  "give one value per record of the index")
    return mask.copy()


def _check_count(name: str, value) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise ConfigError(f"[processing] {name} = {value!r}: expected a whole number >= 1")
    return int(value)


def fill_marginal(target, drivers, index, *, is_night=None, donors="separate_day_night",
                  rg_tolerance=_RG_TOLERANCE, tair_tolerance=_TAIR_TOLERANCE,
                  vpd_tolerance=_VPD_TOLERANCE, max_window_days=_MAX_WINDOW_DAYS,
                  min_donors=_MIN_DONORS, gaps=None, rg_window="centred",
                  night_rg_threshold=_NIGHT_RG_THRESHOLD, clearness=None,
                  clearness_tolerance=_CLEARNESS_TOLERANCE,
                  estimate="local_linear", breaks=None, sun_up=None) -> pd.DataFrame:
    """Fill the gaps of a flux series by marginal distribution sampling.

    Parameters
    ----------
    target : array_like or pandas.Series
        Series to fill, one value per record of ``index`` (taken by position), NaN
        where missing or rejected; e.g. NEE [µmol m-2 s-1].
    drivers : pandas.DataFrame
        Similarity conditions by position, columns ``rg`` [W m-2], ``tair`` [°C] and
        ``vpd`` [hPa], NaN where unavailable; optionally ``tsoil`` [°C], which chooses
        no donor: with separate day and night donors and ``estimate =
        "local_linear"``, the night gaps' fills are also moved by the flux's slope on it
        (new in 0.22.0; Notes); optionally ``rg_day_before`` (:data:`NIGHT_LIGHT_COLUMN`),
        the preceding 24 h mean Rg [W m-2], a regressor of the night fills alike (its
        tolerance that of Rg; NaN where it is not to act; the pipeline gives it only in
        the years whose measured nights show it, :mod:`fluxpart.preceding_light`).
    index : pandas.DatetimeIndex
        Regular 30- or 60-min time axis, stamps at interval start; may span years.
    is_night : array_like of bool, optional
        True for night records, one per record; needed by the default donor rule.
    donors : {"separate_day_night", "similar_conditions_only"}
        Which measured records may fill a gap. ``"separate_day_night"`` (default):
        night gaps only from night records and day gaps only from day records, as
        Falge et al. (2001) fill day and night separately (the diurnal course of a
        day gap excepted: it takes both, see the module notes). ``"similar_conditions_only"``:
        any record within the tolerances, the single rule of Reichstein et al. (2005),
        under which twilight records with photosynthesis (Rg a few tens of W m-2)
        fill night gaps and bias night NEE low.
    rg_tolerance : float
        Similar global radiation within ± this [W m-2]; default 50, Reichstein et
        al. (2005).
    tair_tolerance : float
        Similar air temperature within ± this [°C]; default 2.5, Reichstein et al. (2005).
    vpd_tolerance : float
        Similar vapour pressure deficit within ± this [hPa]; default 5, Reichstein et
        al. (2005).
    max_window_days : float
        Largest half-width of any window of the pass sequence [days]; default 140
        (Reichstein, gap-filling flow chart, workshop slides 2004), ``numpy.inf`` to
        widen up to the whole record. Gaps the sequence leaves unfilled take the
        last-resort passes beyond it (module notes).
    min_donors : int
        Fewest records a pass must find to fill a gap; with fewer, the gap falls to
        the next pass. Default 3, our choice: one random error (about ±1–2 µmol m-2
        s-1 for a half-hour, Richardson et al. 2006) or one undetected spike must
        not set a fill alone, and a spread (``std``) needs more than one record;
        a larger minimum pushes gaps to wider, less similar windows.
    gaps : array_like of bool, optional
        The missing records to fill, one per record; the other missing records are
        left unfilled (``method`` -1). Default: every missing record. A gap's fill
        depends only on the measured records and its own drivers, so the records
        filled are the same as in a fill of every gap (scoring artificial gaps
        needs only the held-out records).
    rg_window : {"centred", "fixed"}
        The radiation window of the similarity steps. ``"centred"`` (default):
        with separate day and night donors, a day gap's Rg tolerance shrinks to
        keep its window centred on its own Rg above the lowest Rg of a day record
        (:func:`centred_rg_tolerance`), so dawn and dusk gaps are not filled from
        brighter records; ``"fixed"``: ±`rg_tolerance` for every gap, as
        published. Under the single donor rule the window is always fixed.
    night_rg_threshold : float
        Rg below which a measured record is night [W m-2]; default 10, as
        :func:`fluxpart.solar.night_mask`. Used by ``rg_window="centred"``.
    clearness : array_like, optional
        Clearness index of each record [1] (:func:`clearness_index`), NaN where Rg is
        unavailable. Given, the all-driver and the radiation steps also require a
        similar clearness, so that an overcast gap (diffuse light, which canopies use
        more efficiently) is not filled from clear-sky records of the same Rg.
        ``None`` (default): the published conditions only.
    clearness_tolerance : float
        Similar clearness index within ± this [1]; default 0.15, our choice (see
        :func:`clearness_index`).
    estimate : {"local_linear", "donor_mean"}
        The fill of a similarity step (all drivers, radiation only).
        ``"local_linear"`` (default since 0.21.0): the donors' mean moved by their
        slope on the condition drivers times the donors' mean offset from the gap
        (:func:`local_linear_correction`), which removes the bias of a gap at the
        edge of its donors' conditions; ``"donor_mean"``: the donors' mean, as
        Reichstein et al. (2005) fill. The diurnal-course step is a mean in both.
    breaks : array_like of int, optional
        Record positions where the ecosystem changed abruptly (a harvest, a cut, a
        fire; :func:`event_breaks` of ``Config.events``): the record is filled piece
        by piece, each gap from the records of its own piece only, so that no fill
        draws on the canopy before an event for a gap after it, or the reverse. The
        windows of each piece widen within it. A gap that no pass fills from its own
        piece (two events hours apart within an outage, an event near the record's
        end) is filled from its piece joined to the next one (the last piece: the one
        before), and further, rather than left unfilled: ``attrs["events_crossed"]``
        of the result lists these joins (:func:`crossed_event_notes`). ``None``
        (default): one piece.
    sun_up : array_like of bool, optional
        True where the sun is above the horizon during the record (potential
        radiation above 0), one per record. Given, with separate day and night
        donors, a night gap with the sun below the horizon is filled from night
        records with the sun below the horizon wherever a pass of quality A or B finds
        enough of them, and only then from every night record (Notes). ``None``
        (default): night gaps take every night record, twilight included.

    Returns
    -------
    pandas.DataFrame
        On ``index``: ``value`` (measured or filled, in the target's unit, NaN if
        unfillable), ``method`` (int8: 0 measured, 1 all drivers, 2 radiation only,
        3 diurnal course, -1 unfilled), ``window_days`` (full window width [days];
        0 for measured, NaN for unfilled), ``count`` (records averaged; 0 for measured
        and unfilled), ``std`` (population standard deviation of the records
        averaged, in the target's unit; NaN for measured and unfilled) and
        ``quality`` (int8: 0 measured, 1 A, 2 B, 3 C, -1 unfilled; labels in
        :data:`QUALITY_NAMES`). With ``breaks`` and a gap filled across one of them,
        ``attrs["events_crossed"]``: a list of (first and last record position of the
        joined piece's span [start, stop), first and last position of the records the
        join filled, their number), ints; the events crossed are the breaks inside the
        span.

    Raises
    ------
    SpacingError, NonMonotonicTimestampError, DuplicateTimestampError
        If ``index`` is not a regular 30- or 60-min time axis.
    MissingColumnError
        If ``drivers`` lacks ``rg``, ``tair`` or ``vpd``.
    FluxpartError
        If a series has the wrong length or is not numeric, or ``is_night`` is
        missing for the default donor rule.
    ImplausibleValueError
        If a series holds an infinite value.
    ConfigError
        If a tolerance is not a positive number, ``min_donors`` not a whole number
        >= 1 or ``donors`` not a known rule.

    Notes
    -----
    The pass sequence, window conventions and quality rule are in the module
    docstring. With separate donors, each class (night, day) runs the whole pass
    sequence on its own records, except that the diurnal course of a day gap takes the
    records of both classes. Inputs are not modified.

    Night NEE is respiration, much of it from the soil, while the donors are chosen on
    air temperature. On calm, clear nights, the very nights the u* filter removes, the
    air near the ground cools by radiation while the soil stays warm, so a filtered
    night's donors (turbulent nights of the same air temperature) have cooler soil and
    respire less: the fill runs low. With ``tsoil``, the local-linear correction also
    regresses the night records on soil temperature (in units of ``tair_tolerance``)
    and moves each night fill by that slope times the donors' soil-temperature offset
    from the gap, in the all-driver step and in the radiation step within ±7 days. On
    six independent known-truth trials (`tests/benchmarks/trial_sixth.py` to
    `trial_eleventh.py`, 77 site-years, several with calm-night decoupling of air and
    soil) annual NEE was covered in 60 → 63 and within 15 g C m-2 in 54 → 58; on the
    70 calibration site-years the RMS annual NEE error moved 5.94 → 5.82 g C m-2
    (generalisation 8.46 → 8.48, other physics 9.10 → 9.26: generators without
    decoupling, where the slope is noise).

    Night is Rg below ``night_rg_threshold``, so the night class holds twilight records
    with the sun up whose canopy takes up CO2 in the little light there is. With
    ``sun_up``, a gap in darkness takes dark donors first (:func:`_dark_first`; new in
    0.27.0, the pipeline's ``gapfill_donors = "dark_first"``, not the default). On
    nine independent known-truth trials (107 invented site-years) the part of the filled
    dark nights' error that the donors' own conditions cause (their fill of the true NEE
    of the same records) had a median of −1.2 g C m-2 a year, −0.15 without twilight
    donors; with dark donors first annual NEE moved by a median of +1.0 g C m-2, on the
    generated benchmarks by +0.2 to +0.5 (DEVELOPERS.md, 0.27.0 changelog).

    References
    ----------
    Reichstein, M., et al. (2005). Global Change Biology 11, 1424–1439, appendix A.
    doi:10.1111/j.1365-2486.2005.001002.x

    Falge, E., Baldocchi, D., Olson, R., et al. (2001). Gap filling strategies for
    defensible annual sums of net ecosystem exchange. Agricultural and Forest
    Meteorology 107, 43–69.

    Richardson, A. D., et al. (2006). Agricultural and Forest Meteorology 136, 1–18.
    doi:10.1016/j.agrformet.2006.01.007
    """
    columns, crossed = _marginal_columns(
        target, drivers, index, is_night=is_night, donors=donors, rg_tolerance=rg_tolerance,
        tair_tolerance=tair_tolerance, vpd_tolerance=vpd_tolerance,
        max_window_days=max_window_days, min_donors=min_donors, gaps=gaps, rg_window=rg_window,
        night_rg_threshold=night_rg_threshold, clearness=clearness,
        clearness_tolerance=clearness_tolerance, estimate=estimate, breaks=breaks,
        sun_up=sun_up)
    out = _output_frame(index, *columns)
    if crossed:
        out.attrs["events_crossed"] = crossed
    return out


def fill_marginal_values(target, drivers, index, **settings) -> np.ndarray:
    """The ``value`` column of :func:`fill_marginal` as an array, without the other columns.

    Parameters
    ----------
    target, drivers, index
        As :func:`fill_marginal`.
    **settings
        The keyword settings of :func:`fill_marginal`.

    Returns
    -------
    numpy.ndarray
        ``fill_marginal(target, drivers, index, **settings)["value"]``, bit for bit
        [the target's unit, e.g. µmol m-2 s-1]: for callers that use the filled values
        only (fills scored on artificial gaps, a long gap filled from one side), which
        so skip the quality classes and the frame of every record.

    Raises
    ------
    As :func:`fill_marginal`.

    References
    ----------
    As :func:`fill_marginal` (Reichstein et al. 2005, appendix A).
    """
    return _marginal_columns(target, drivers, index, **settings)[0][0]


def _marginal_columns(target, drivers, index, *, is_night=None, donors="separate_day_night",
                      rg_tolerance=_RG_TOLERANCE, tair_tolerance=_TAIR_TOLERANCE,
                      vpd_tolerance=_VPD_TOLERANCE, max_window_days=_MAX_WINDOW_DAYS,
                      min_donors=_MIN_DONORS, gaps=None, rg_window="centred",
                      night_rg_threshold=_NIGHT_RG_THRESHOLD, clearness=None,
                      clearness_tolerance=_CLEARNESS_TOLERANCE,
                      estimate="local_linear", breaks=None, sun_up=None) -> tuple:
    """The output columns of :func:`fill_marginal` (value, method, window_days, count,
    std as arrays) and its list of joined pieces (``attrs["events_crossed"]``)."""
    per_day, diurnal_records = _records_per_day(index)
    values = _as_values(target, "target", index)
    _driver_columns(drivers, _DRIVERS, "drivers")
    rg, tair, vpd = (_as_values(drivers[name], f"drivers[{name!r}]", index) for name in _DRIVERS)
    tolerances = [_check_setting(name, value) for name, value in (
        ("rg_tolerance", rg_tolerance), ("tair_tolerance", tair_tolerance),
        ("vpd_tolerance", vpd_tolerance))]
    _check_setting("max_window_days", max_window_days, allow_zero=True, allow_inf=True)
    min_donors = _check_count("gapfill_min_donors", min_donors)
    night = _check_donors(donors, is_night, index)
    if rg_window not in RG_WINDOWS:
        raise ConfigError(f"[processing] gapfill_rg_window = {rg_window!r}: expected one of "
                          f"{', '.join(repr(rule) for rule in RG_WINDOWS)}")
    if estimate not in ESTIMATES:
        raise ConfigError(f"[processing] gapfill_estimate = {estimate!r}: expected one of "
                          f"{', '.join(repr(name) for name in ESTIMATES)}")
    if rg_window == "centred" and night is not None:
        threshold = _check_setting("night_rg_threshold", night_rg_threshold)
        tolerances[0] = centred_rg_tolerance(rg, night, tolerances[0], threshold)
    if sun_up is not None:
        sun_up = np.asarray(sun_up)
        if sun_up.dtype != bool or sun_up.shape != (len(index),):
            raise FluxpartError(f"sun_up: expected one bool per record ({len(index)}), "
                                f"found dtype {sun_up.dtype} and shape {sun_up.shape}")
    wanted = None
    if gaps is not None:
        wanted = np.asarray(gaps)
        if wanted.dtype != bool or wanted.shape != (len(index),):
            raise FluxpartError(f"gaps: expected one bool per record ({len(index)}), found "
                                f"dtype {wanted.dtype} and shape {wanted.shape}")
    all_conditions = list(zip((rg, tair, vpd), tolerances, strict=True))
    radiation_conditions = [(rg, tolerances[0])]
    if clearness is not None:
        condition = (_as_values(clearness, "clearness", index),
                     _check_setting("gapfill_clearness_tolerance", clearness_tolerance))
        all_conditions.append(condition)
        radiation_conditions.append(condition)
    regressors = list(zip((tair, vpd), tolerances[1:], strict=True))
    # soil temperature and the preceding day's light: regressors of the night fills
    # where the drivers carry them
    night_regressors = [
        (_as_values(drivers[name], f"drivers[{name!r}]", index), tolerance)
        for name, tolerance in (("tsoil", tolerances[1]),
                                (NIGHT_LIGHT_COLUMN, _check_setting("rg_tolerance", rg_tolerance)))
        if name in drivers.columns]

    def fill(piece, want):
        def cut(pairs):
            return [(driver[piece], tolerance[piece] if np.ndim(tolerance) else tolerance)
                    for driver, tolerance in pairs]

        return _fill_series(
            values[piece], per_day, diurnal_records,
            all_conditions=cut(all_conditions),
            radiation_conditions=cut(radiation_conditions),
            max_window_days=max_window_days, min_donors=min_donors,
            is_night=None if night is None else night[piece], wanted=want, last_resort=True,
            local_linear=estimate == "local_linear", radiation_regressors=cut(regressors),
            night_regressors=cut(night_regressors),
            sun_up=None if night is None or sun_up is None else sun_up[piece])

    return _fill_pieces(fill, values, wanted, breaks)


def _fill_pieces(fill, values, wanted, breaks) -> tuple:
    """The output columns of `fill` run piece by piece between `breaks`, and the joins.

    `fill(piece, want)` fills the records `piece` (a slice) from their own records, only
    the gaps `want` (bool per record of the piece, or None for all). A gap its own piece
    cannot fill (two events hours apart in an outage, an event near the record's end:
    too few measured records between them) is filled from its piece joined to the next
    one (the last piece: to the one before), joined further until it fills or the record
    is whole again; its neighbours' records are then closer to its conditions than
    none. Returns the columns and, per join that filled a record, (start and stop of the
    joined piece, first and last position of the records that join filled, their number)
    in a list (empty where every gap filled in its own piece). A record a join leaves
    unfilled is counted only by the join that fills it, whose piece spans every event
    dropped before it (review25: three events in an outage had the first join's
    warning count records the next join filled, naming one event of the two crossed).
    """
    n = values.size
    edges = [0, *sorted({int(b) for b in (() if breaks is None else breaks) if 0 < b < n}), n]
    parts = [fill(slice(start, stop), None if wanted is None else wanted[start:stop])
             for start, stop in zip(edges[:-1], edges[1:], strict=True)]
    if len(parts) == 1:
        return parts[0], []
    columns = tuple(np.concatenate(part) for part in zip(*parts, strict=True))
    asked = np.isnan(values) if wanted is None else np.isnan(values) & wanted
    crossed = []
    while len(edges) > 2:
        left = asked & (columns[1] == METHOD_UNFILLED)
        if not left.any():
            break
        k = int(np.searchsorted(edges, np.argmax(left), side="right")) - 1
        drop = k + 1 if k + 2 < len(edges) else k
        edges.pop(drop)
        piece = slice(edges[drop - 1], edges[drop])
        part = fill(piece, left[piece])
        for column, values_of_part in zip(columns, part, strict=True):
            column[piece] = np.where(left[piece], values_of_part, column[piece])
        records = np.flatnonzero(left[piece] & (part[1] != METHOD_UNFILLED)) + piece.start
        if records.size:
            # plain ints: pandas compares and copies a frame's attrs in its operations
            crossed.append((int(piece.start), int(piece.stop), int(records[0]),
                            int(records[-1]), int(records.size)))
    return columns, crossed


def event_breaks(index, events) -> np.ndarray:
    """Record positions where an event starts a new piece of the record.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record starts (local standard time).
    events : sequence of str
        Event dates or date-times (ISO 8601, local standard time), e.g.
        ``Config.events``.

    Returns
    -------
    numpy.ndarray of int
        Sorted distinct positions p, 0 < p < len(index): records from p on lie after
        the event (a record starting at the event's time is after it). Events before
        the second record or after the last are left out.
    """
    if not len(events):
        return np.array([], dtype=np.int64)
    stamps = pd.DatetimeIndex([pd.Timestamp(event) for event in events]).sort_values()
    positions = np.unique(index.searchsorted(stamps, side="left"))
    return positions[(positions > 0) & (positions < len(index))].astype(np.int64)


def event_notes(index, events) -> list:
    """Warnings for ``Config.events`` that cut no piece off the record `index`.

    An event before the record's first record or after its last one changes no fill
    (:func:`event_breaks`): most likely a mistyped year, which the user should see. One
    at the first record's start changes none either, but lies in the record (a record
    begun on the day of a harvest) and is not named.
    """
    if not len(events) or not len(index):
        return []
    outside = [event for event in events
               if not index[0] <= pd.Timestamp(event) <= index[-1]]
    if not outside:
        return []
    return [f"events: {', '.join(outside)} lie{'s' if len(outside) == 1 else ''} outside the "
            f"record ({index[0]:%Y-%m-%d %H:%M} to {index[-1]:%Y-%m-%d %H:%M}), so "
            f"{'it cuts' if len(outside) == 1 else 'they cut'} no gap filling; check the year"]


def crossed_event_notes(index, events, crossed) -> list:
    """Warnings for the NEE gaps filled across an event (``attrs["events_crossed"]`` of
    :func:`fill_marginal`).

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record starts (local standard time) of the fill.
    events : sequence of str
        ``Config.events`` (ISO 8601, local standard time).
    crossed : list of (int, int, int, int, int)
        Per join: the start and stop position of the joined piece, the first and last
        position of the records that join filled, and their number.

    Returns
    -------
    list of str
        One warning per join naming its records and the events its piece crosses;
        beyond three joins (events day after day) one warning for all, counting the
        records and joins and naming the first three; empty where none.
    """
    notes, summary, crossed_names = [], [], []
    for start, stop, first_record, last_record, count in crossed:
        names = [event for event in events
                 if any(start < b < stop for b in event_breaks(index, [event]))]
        first, last = (f"{index[i]:%Y-%m-%d %H:%M}" for i in (first_record, last_record))
        where = (f"1 NEE record at {first}" if count == 1
                 else f"{count} NEE records from {first} to {last}")
        summary.append(where)
        crossed_names += [name for name in names if name not in crossed_names]
        one = count == 1
        notes.append(
            f"events: {where} (interval starts) could not be filled from "
            f"{'its' if one else 'their'} own piece of the record (too few measured records "
            "between the events or the record's edge around them); "
            f"{'it was' if one else 'they were'} filled across {', '.join(names)} "
            f"from the neighbouring piece{'s' if len(names) > 1 else ''} as well, rather "
            "than left unfilled")
    if len(notes) <= _LISTED_JOINS:
        return notes
    total = sum(join[4] for join in crossed)
    shown = "; ".join(summary[:_LISTED_JOINS]) + f"; and {len(summary) - _LISTED_JOINS} more"
    events_shown = ", ".join(crossed_names[:_LISTED_JOINS]) + (
        f" and {len(crossed_names) - _LISTED_JOINS} more" if len(crossed_names) > _LISTED_JOINS
        else "")
    return [f"events: {total} NEE records in {len(crossed)} stretches could not be filled "
            "from their own piece of the record (too few measured records between the "
            f"events or the record's edge around them): {shown} (interval starts); they "
            f"were filled across {len(crossed_names)} of the events ({events_shown}) from "
            "the neighbouring pieces as well, rather than left unfilled"]


#: Joins across events named one warning each before :func:`crossed_event_notes` sums
#: them in one.
_LISTED_JOINS = 3


def clearness_index(rg, potential, *, min_potential=_CLEARNESS_MIN_POTENTIAL) -> np.ndarray:
    """Clearness index: global radiation over top-of-atmosphere radiation [1].

    Parameters
    ----------
    rg : array_like
        Global radiation [W m-2], NaN where unavailable.
    potential : array_like
        Top-of-atmosphere irradiance on a horizontal surface [W m-2], same records
        (:func:`fluxpart.solar.potential_radiation`).
    min_potential : float
        Below this potential [W m-2] (night, the sun at the horizon) the index is 0.

    Returns
    -------
    numpy.ndarray
        Rg / potential clipped to [0, 1.2]; 0 where the potential is below
        `min_potential`; NaN where Rg is NaN.

    Notes
    -----
    The clearness index separates overcast from clear skies at the same Rg (a low sun
    in a clear sky and a high sun behind clouds give the same Rg): the diffuse share of
    global radiation falls from nearly all below an index of about 0.2 to about a fifth
    above 0.75 (Erbs et al. 1982 (m)), and canopies use diffuse light more efficiently
    (Gu et al. 2002 (m)). Gaps in rain (a wet open-path analyser) are overcast hours;
    filled from clear-sky donors of the same Rg they take up too little CO2 (+1 to +8
    g C m-2 a year on the fourth independent trial). The tolerance ±0.15 is our
    choice: about a quarter of the index's range between overcast and clear sky, wide
    enough that a window of ±7 days still holds donors (see DEVELOPERS.md, 0.14.0).

    References
    ----------
    Liu, B. Y. H., Jordan, R. C. (1960). The interrelationship and characteristic
    distribution of direct, diffuse and total solar radiation. Solar Energy 4, 1–19 (m).

    Erbs, D. G., Klein, S. A., Duffie, J. A. (1982). Estimation of the diffuse radiation
    fraction for hourly, daily and monthly-average global radiation. Solar Energy 28,
    293–302 (m).

    Gu, L., Baldocchi, D., Verma, S. B., et al. (2002). Advantages of diffuse radiation
    for terrestrial ecosystem productivity. Journal of Geophysical Research 107, 4050 (m).
    """
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        index = np.where(potential > min_potential, np.clip(rg / potential, 0.0, 1.2), 0.0)
    return np.where(np.isnan(rg), np.nan, index)


def fill_drivers(frame, *, rg_tolerance=_RG_TOLERANCE, max_window_days=_MAX_WINDOW_DAYS,
                 interpolation_hours=_INTERPOLATION_HOURS) -> pd.DataFrame:
    """Fill the gaps of the meteorological drivers.

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
        Largest half-width of any window [days]; default 140 (Reichstein,
        gap-filling flow chart, workshop slides 2004).
    interpolation_hours : float
        Gaps of Tair, VPD and Tsoil up to this long [hours] (missing records ×
        record length), with values on both sides, are filled by linear
        interpolation; 0 turns it off. Default 3 h, our choice: these drivers
        change smoothly over a few hours (air temperature by a few kelvin), so a
        straight line between the neighbours is closer than the mean of other
        days with similar radiation, which mixes weather of different days.

    Returns
    -------
    pandas.DataFrame
        On ``frame.index``: ``rg_filled`` [W m-2], ``rg_fill_quality``,
        ``tair_filled`` [°C], ``tair_fill_quality``, ``vpd_filled`` [hPa],
        ``vpd_fill_quality`` and, if ``tsoil`` is given, ``tsoil_filled`` [°C] and
        ``tsoil_fill_quality``. Quality codes (int8) as in :func:`fill_marginal`,
        plus 4 (``"interpolated"``) for linear interpolation.

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
    Short gaps of Tair, VPD and Tsoil are interpolated first. Rg is not: it
    follows the sun's path, which is far from a straight line over hours (dawn,
    noon, dusk). The remaining gaps are filled by MDS: Rg has no driver to be
    similar in, so it is filled by the mean diurnal course (step 3 and its widened
    rounds); Tair and VPD with measured Rg as the similarity condition (step 2,
    quality B, then step 3), as the paper's appendix does for meteorological data
    (m). Soil temperature lags radiation by hours, so ``tsoil`` is filled by the
    diurnal course only (our choice). Only measured values of a driver are
    averaged (never interpolated ones), only measured Rg serves as a condition,
    and a single record is enough to fill a driver gap (the driver's own noise is
    small beside its day-to-day changes).

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
    hours = _check_setting("[processing] gapfill_interpolation_hours", interpolation_hours,
                           allow_zero=True)
    max_records = int(np.floor(hours * per_day / 24.0 + 1e-9))
    names = list(_DRIVERS) + (["tsoil"] if "tsoil" in frame.columns else [])
    series = {name: _as_values(frame[name], f"frame[{name!r}]", index) for name in names}
    out = {}
    for name in names:
        uses_radiation = name in ("tair", "vpd")
        values = series[name]
        short = (_short_gaps(values, max_records) if name in _INTERPOLATED_DRIVERS
                 else np.zeros(values.size, dtype=bool))
        value, method, window_days, _, _ = _fill_series(
            values, per_day, diurnal_records, all_conditions=None,
            radiation_conditions=[(series["rg"], rg_tol)] if uses_radiation else None,
            max_window_days=max_window_days, interpolated=short)
        value[short] = _interpolate(values, short)[short]
        out[f"{name}_filled"] = value
        out[f"{name}_fill_quality"] = quality_class(method, window_days)
    return pd.DataFrame(out, index=index.copy())


def driver_conditions(filled_drivers, *, soil=False) -> pd.DataFrame:
    """Drivers to use as similarity conditions when filling a flux.

    Parameters
    ----------
    filled_drivers : pandas.DataFrame
        Output of :func:`fill_drivers`.
    soil : bool
        Also return ``tsoil`` [°C] where `filled_drivers` has it: the night fills'
        regressor of :func:`fill_marginal` (not a condition).

    Returns
    -------
    pandas.DataFrame
        Columns ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa] (and ``tsoil``): the filled
        driver where it was measured, interpolated across a short gap or filled with
        quality A, NaN otherwise.

    Notes
    -----
    Our choice: a driver filled with quality B or C is too uncertain to decide
    similarity, so a flux gap at such a record falls to a later step (e.g. step 2
    if only Rg is good, or the diurnal course). Interpolated values (gaps of a few
    hours) are kept: their error, under 1 K for Tair on the benchmark of
    ``tests/benchmarks/bench_gapfill.py``, is well inside the 2.5 °C tolerance.
    """
    columns = [f"{name}_{part}" for name in _DRIVERS for part in ("filled", "fill_quality")]
    _driver_columns(filled_drivers, columns, "filled_drivers")
    out = {}
    names = [*_DRIVERS, *(["tsoil"] if soil and "tsoil_filled" in filled_drivers.columns
                          else [])]
    for name in names:
        quality = filled_drivers[f"{name}_fill_quality"].to_numpy()
        good = np.isin(quality, (QUALITY_MEASURED, QUALITY_A, QUALITY_INTERPOLATED))
        out[name] = np.where(good, filled_drivers[f"{name}_filled"].to_numpy(np.float64), np.nan)
    return pd.DataFrame(out, index=filled_drivers.index.copy())


def fill_frame(frame, *, target="nee", is_night=None, donors="separate_day_night",
               rg_tolerance=_RG_TOLERANCE, tair_tolerance=_TAIR_TOLERANCE,
               vpd_tolerance=_VPD_TOLERANCE, max_window_days=_MAX_WINDOW_DAYS,
               min_donors=_MIN_DONORS,
               interpolation_hours=_INTERPOLATION_HOURS,
               estimate="local_linear", sun_up=None) -> pd.DataFrame:
    """Fill the drivers, then the flux column of a canonical frame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical records on a regular 30- or 60-min DatetimeIndex with the flux
        column ``target`` (NaN where missing or rejected, e.g. after u* filtering)
        and ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa], optionally ``tsoil`` [°C].
    target : str
        Name of the flux column; default ``"nee"`` [µmol m-2 s-1].
    is_night, donors, min_donors, estimate
        As in :func:`fill_marginal` (``estimate="donor_mean"``: the donors' mean of
        Reichstein et al. 2005).
    rg_tolerance, tair_tolerance, vpd_tolerance : float
        Similarity tolerances [W m-2], [°C], [hPa]; defaults 50, 2.5, 5 (Reichstein
        et al. 2005).
    max_window_days : float
        Largest half-width of any window [days]; default 140.
    interpolation_hours : float
        As in :func:`fill_drivers` [hours]; default 3.
    sun_up : numpy.ndarray of bool, optional
        As in :func:`fill_marginal`: with it, a night gap with the sun below the horizon
        takes dark night donors first (the pipeline's ``gapfill_donors = "dark_first"``);
        default None, the night class as it is.

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
    The flux is filled with the conditions of :func:`driver_conditions`, with soil
    temperature where `frame` has ``tsoil`` (the night fills' regressor), as
    :func:`fluxpart.process` fills NEE.
    """
    _driver_columns(frame, [target, *_DRIVERS], "frame")
    drivers = fill_drivers(frame, rg_tolerance=rg_tolerance, max_window_days=max_window_days,
                           interpolation_hours=interpolation_hours)
    flux = fill_marginal(frame[target], driver_conditions(drivers, soil=True), frame.index,
                         is_night=is_night, donors=donors, rg_tolerance=rg_tolerance,
                         tair_tolerance=tair_tolerance, vpd_tolerance=vpd_tolerance,
                         max_window_days=max_window_days, min_donors=min_donors,
                         estimate=estimate, sun_up=sun_up)
    flux.columns = [f"{target}_filled" if c == "value" else f"{target}_fill_{c}"
                    for c in flux.columns]
    return pd.concat([drivers, flux], axis=1)
