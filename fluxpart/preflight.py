"""Preflight: every condition that would make a stage of the pipeline fail or fall back.

``fluxpart check`` lists these findings and ``fluxpart run`` (through
:func:`fluxpart.pipeline.process`) stops on the fatal ones before any fit, with a
message naming the cause and the stage, instead of failing deep inside a fit.

Each finding is a necessary condition of its stage, counted on the screened
record (before the u* filter, which can only remove more records, except where
its threshold is already known: ``ustar_method = "fixed"`` or the fixed
fall-back of years without enough night records for detection): when a
finding says a stage cannot run, it cannot; when none is found, the fits can still
reject every window for reasons only the fit sees (a poor Lloyd–Taylor fit, say),
and then the stage's own error names them.

Findings by the stage each is listed under (as ``fluxpart check`` prints it; ``<column>``
stands for the canonical name of the column concerned). docs/checks.md tells users what each
check judges and what it moved on the invented example site; this list is the developers'
map from a printed stage to its condition, and ``tests/test_leftovers51.py`` fails where a
stage the package can list is missing here (leftovers51: a dozen were).

Fatal (the run stops before any fit):

- ``gap filling and both partitionings``, ``night mask and daytime light response``,
  ``nighttime partitioning (Lloyd–Taylor E0)``, ``u* filter``: NEE, Rg, the respiration
  temperature or u* constant (``_CONSTANT``; a constant VPD is listed under
  ``daytime VPD limitation and gap filling``, not fatal).
- ``u* filter``: u* with a year's median of a wind speed (above 1.5 m s-1).
- ``whole record``: no records.
- ``respiration temperature``: the fixed ``respiration_driver``'s column without a value.
- ``nighttime partitioning (E0)``: a record shorter than one E0 window, or no E0 window
  with enough night records spanning enough temperature; not fatal with ``e0_fallback``,
  where another year has one, or where the year's joint E0 fit (``e0_method = "joint"``,
  the one fit this module runs: :func:`fluxpart.partition.nighttime.fit_e0_joint` on the
  counted night records) is accepted, as the run takes it (leftovers53).
- ``nighttime partitioning (Rref)``: no Rref window with enough night records (1).
- ``daytime partitioning (light response)``: no light-response window with enough measured
  daytime records (1).
- ``night mask``: Rg above the night threshold in most records with the sun down; fatal
  only where the nighttime stages fail with it.

Warnings (the run goes on):

- ``u* threshold``: no season with enough night records for the u* detector (a fall-back
  threshold is used).
- ``u* filter``: u* missing at more than 10 % of the night records with measured NEE (those
  nights are rejected).
- ``annual budget``: a record shorter than a year (partial sums), or a day absent at a
  budget year's edge added as empty records.
- ``gap filling``: a gap of measured NEE longer than the largest quality-A window (28 days;
  filled with quality C), or an event (``events``) outside the record.
- ``gap filling (night)``: night records without measured NEE for more than 28 days.
- ``gap filling (drivers)``: a driver (tair, tsoil, VPD, Rg) missing for more than 28 days
  while NEE was measured.
- ``screening (Rg above potential radiation)``: many Rg records above the potential
  radiation (clock evidence).
- ``night mask``: ``night_rg_threshold`` counting sunlit records with photosynthesis as
  night, or reached by a tenth of deep-night records (sensor noise as day).
- ``nighttime partitioning (uptake in the dark)``: months whose dark records mostly take up
  CO2 (CAM plants, a heated open-path analyser).
- ``input (<column>)``: a variable repeating one value for days (a stuck sensor; Rg with the
  sun up).
- ``input (<column> flag)``: a column mapped as a measured variable holding a few whole-number
  codes (a flag).
- ``input (<column> twice)``: a column repeating its value in every other record (a coarser
  file joined).
- ``input (repeated records)``: a day or more of records repeating earlier ones in every
  variable.
- ``input (repeated NEE)``: measured NEE equal, value for value, to the NEE a whole number of
  days (or any number of records) earlier (the flux column pasted over other days).
- ``input (repeated <column>)``: u* or Rg equal to its own values a fixed number of records
  earlier (the column pasted over other records).
- ``input (tair, tsoil)``: soil temperature swinging more than the air (columns swapped).
- ``input (tair = tsoil)``: air and soil temperature equal, record for record, for a day
  (one sensor twice).
- ``input (spliced records)``: two or more joints where soil and air temperature step
  together far beyond the record's own changes (another file's records pasted in).
- ``input (nee)``: NEE changing with Rg whole records earlier or later (column shifted; also
  where :func:`.record_shifts.nee_day_shift` finds a record's shift beating every day's).
- ``input (nee days)``: NEE changing with Rg whole days earlier or later (files of other
  dates joined).
- ``input (nee sign)``: months whose NEE rises with light beside months whose NEE falls with
  it (or weeks where no month does).
- ``input (nee day sign)``: NEE negated by day only: nights a release, warm bright records a
  long release tail, no month falling with light.
- ``input (nee no uptake)``: NEE below 0 in under 5 % of a year's warm, bright records,
  nights a release (another gas's flux, a bare site).
- ``input (weather pairing)``: NEE answering none of the record's weather (another
  record's weather beside it).
- ``input (nee filled)``: NEE on straight lines over runs of records (gaps interpolated).
- ``input (nee cut)``: NEE ending abruptly 2 µmol m-2 s-1 or more from 0 (values beyond a
  limit removed).
- ``input (nee one sign)``: NEE of one sign only next to 0, by day or at night (values of
  one sign removed).
- ``input (nee smoothed)``: night NEE changing as a running mean's (errors shared by
  neighbouring records).
- ``input (nee fixed time)``: NEE departing from its neighbours with one sign at fixed
  times of day (a daily analyser calibration kept as data).
- ``input (nee u* filtered)``: night NEE missing below one u* and measured above it
  (filtered before it was read).
- ``input (nee gapless)``: NEE present and accepted in every record for 60 days (filled or
  unscreened).
- ``input (ustar of another record)``: u* missing for days where NEE and the weather were
  measured (another record's u*, or u* removed alone by a check).
- ``input (ustar unit)``: the nights' u* far above what the surface layer allows for the
  site's canopy in two or more months (u* in km h-1, or a wind speed mapped as u*;
  ``ustar_scale``, called from the screening stage).
- ``input (nee density terms)``: NEE taking up CO2 in most bright records of frozen air
  (an open-path flux without its density terms, or self-heating uncorrected;
  ``frozen_uptake``).
- ``input (leap day)``: a leap year's 29 February empty for exactly one day between two
  complete days (the file stamped a year early or late, or a calendar without leap days;
  ``leap_day``).
- ``input (rg shaded)``: Rg of clear mornings and afternoons at the same sun height far
  apart (shaded).
- ``input (rg dark)``: Rg missing in the dark but present by day.
- ``input (rg zeros)``: Rg of 0 or less with the sun well up (a lost value written as 0).
- ``input (rg dim)``: Rg too dim for any sky (99th percentile below half the potential
  radiation) in 60 days of whole months, not in the rest.
- ``input (tair flat)``: an air temperature without a diurnal course on clear days.
- ``input (<column> filler)``: one value of tair or u* written into gap after gap.
- ``input (<column> zeros)``: air or soil temperature dropping to exactly 0 and back by
  jumps (a code).
- ``input (tair)``: tair fitting VPD and RH whole records earlier or later (column shifted).
- ``input (tair delayed)``: tair's daily course trailing the humidity's (a delayed column or
  a slow sensor).
- ``input (tair days)``: tair fitting VPD and RH whole days earlier or later (files of other
  dates).
- ``input (tair dew point)``: tair fitting VPD and RH as the dew point.
- ``input (vpd vapour pressure)``: the VPD column holding the (saturation) vapour pressure.
- ``input (vpd exchanged)``: another column holding the VPD in some months.
- ``input (vpd from tsoil)``: VPD and RH implying the soil temperature (VPD computed with
  it, not the air's).
- ``input (tair sunlit)``: tair warmer in sunlight than VPD and RH imply (a thermometer
  heated by the sun, or a VPD of another temperature).
- ``input (tair damped)``: tair's daily course swinging clearly less than the one VPD and RH
  imply (a sonic's temperature, a sensor in shade, hourly means; round mistakes50).
- ``input (vpd zeros)``: VPD 0 in most sunlit, warm records of a month (a rain gauge, a lost
  sensor).
- ``input (tsoil depth)``: a soil temperature without a daily cycle on warm days whose air
  swings (a deep probe, or daily means, mapped as the topsoil's; round mistakes60).

(1) Where it is the only fatal finding, the run goes on with the other partitioning
method alone (:mod:`fluxpart.method_failure`), and the finding is not fatal.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import (
    budget_calendar,
    budget_warnings,
    damped_tair,
    day_sign,
    fixed_time_offsets,
    frozen_uptake,
    leap_day,
    nee_limits,
    nee_smoothing,
    night_uptake,
    rg_dim,
    rg_zeros,
    soil_depth,
    solar,
    spliced_records,
    sunlit_uptake,
    tair_days,
    ustar_pairing,
    ustar_prefilter,
    vpd_soil,
    vpd_zero,
    weather_pairing,
)
from .column_faults import (
    PLACEHOLDER_VARIABLES,
    censored_nee,
    delayed_tair,
    delayed_tair_in_a_year,
    dew_point_as_tair,
    flag_as_measurement,
    flat_air_temperature,
    gapless_nee,
    interpolated_nee,
    placeholder_value,
    rg_blank_in_the_dark,
    same_temperature_columns,
    shaded_rg,
    sun_heated_tair,
    swapped_temperatures,
    swapped_temperatures_in_months,
    values_written_twice,
    vapour_pressure_as_vpd,
    zero_coded_temperature,
)
from .gapfill import QUALITY_A_WINDOW_DAYS, event_breaks
from .night_threshold import dark_as_day, twilight_as_night
from .partition.nighttime import fit_e0_joint
from .record_shifts import (
    RECORD_SHIFT_WORDS,
    months_rising_with_light,
    nee_day_shift,
    nee_hour_shift,
    nee_lag,
    nee_shift_from_month,
    tair_lag,
)
from .screening import site_flag
from .uncertainty import gap_runs
from .ustar import assign_seasons
from .vpd_exchange import vpd_exchanged_in_months, vpd_mapped_to_another

__all__ = ["CLOCK_SHIFT_CLAUSE", "Finding", "MISSING_USTAR_SHARE", "RG_ABOVE_POTENTIAL_SHARE", "defer_to_clock",
           "preflight", "shade_at_clock_shift"]

#: Share of sunlit records whose Rg exceeds the potential radiation (beyond the
#: screening margins) above which the screen's rejections are reported as clock or
#: geometry evidence [1]; 1 %, our choice: with correct settings only cloud-edge
#: enhancement at the margins reaches it, which is rare; a clock an hour off puts
#: a quarter of the sunlit records there.
RG_ABOVE_POTENTIAL_SHARE = 0.01

#: Share of the night records with measured NEE that lack u* above which the loss is
#: reported [1]; 10 %, our choice: short u* dropouts (a sonic's rain gaps) are routine,
#: while a tenth of the nights lost to a missing column is a change of the budget's
#: evidence a user should hear of.
MISSING_USTAR_SHARE = 0.10

# variable -> (stage it feeds, whether a constant series stops the run)
_CONSTANT = {
    "nee": ("gap filling and both partitionings", True),
    "rg": ("night mask and daytime light response", True),
    "tair": ("nighttime partitioning (Lloyd–Taylor E0)", True),
    "tsoil": ("nighttime partitioning (Lloyd–Taylor E0)", True),
    # a constant u* is "detected" as its own value and filters nothing, so calm nights
    # would enter the budget unfiltered with a u* uncertainty of 0: the run stops
    # (since 0.12.0; before, it only warned)
    "ustar": ("u* filter", True),
    "vpd": ("daytime VPD limitation and gap filling", False),
}
_CONSTANT_CONSEQUENCE = {
    "ustar": (" (a constant u* is its own threshold and filters no calm night: the budget "
              "would take every night's flux as measured and state no u* uncertainty); map "
              "the measured friction velocity as ustar"),
}
# Wind speed mapped as u* (our criterion): in the logarithmic wind profile u* = κU /
# ln((z - d) / z0) (κ = 0.41, a textbook fact (m)), so u* is at most about a quarter of the
# wind speed U even over the roughest canopy ((z - d) / z0 ≈ 5, a forest's tower) and a
# tenth or less over grass and crops ((z - d) / z0 ≈ 100-300); stable nights lower it
# further. A year's median wind at tower height over land rarely exceeds 5-6 m s-1 even at
# exposed sites (m), so a year's median u* stays below 0.25 x 6 = 1.5 m s-1 in the roughest
# and windiest case, and typical medians are 0.2-0.7 m s-1 (m); tall forests reach 1.5-2
# m s-1 in single half-hours of a storm, never as a year's median. A year's median wind
# speed, in turn, is above 1.5 m s-1 at almost every tower: wind speed (or u* in cm s-1)
# mapped as ustar is refused. A sheltered site whose median wind stays below it passes.
_WIND_AS_USTAR_MEDIAN = 1.5   # [m s-1]
_WIND_AS_USTAR_DAYS = 30.0    # days of present u* a calendar year needs to be judged
_DISTINCT_VALUES = 3          # fewer distinct present values than this is "constant"
# Stuck sensors (our choice): a variable repeating one value over this many days of
# consecutive present records, other than values its air can hold for that long (VPD 0
# and RH 100 in fog, soil at 0 °C while ice melts). A real sensor's last digit moves
# within hours; a dead one repeats. Rg counts only with the sun up in
# _STUCK_SUNLIT_RECORDS records of the run (potential radiation above _STUCK_SUN_UP
# W m-2), so night zeros and polar night never count.
_STUCK = {"nee": (1.0, ()), "rg": (1.0, ()), "ustar": (1.0, ()), "tair": (2.0, ()),
          "tsoil": (2.0, (0.0,)), "vpd": (2.0, (0.0,)), "rh": (2.0, (100.0,))}
_STUCK_SUN_UP = 200.0
# Soil held in the zero curtain under snow [°C]: freezing soil water stays at its freezing
# point for weeks to months, a few tenths of a K below 0 (solutes and capillarity depress
# it (m)), and a probe reads it within its accuracy of about ±0.2 K (m); a logger at 0.1 K
# resolution then repeats -0.1 or -0.2 as naturally as 0. A soil value this close to 0
# is not called stuck.
_ZERO_CURTAIN = 0.5
# ... unless the run begins or ends with a jump of more than this [K] from the record
# beside it: conduction brings a soil to its freezing point gradually. At depth z the
# daily cycle of amplitude A0 exp(-z / d) (d about 0.1 m; Campbell & Norman 1998, ch. 8
# (m)) changes at most A0 exp(-z / d) 2 pi / 24 h, about 4 K an hour at 2 cm under a bare
# surface swinging 20 K (m), so a soil at 15 °C one record and 0 the next is a logger
# writing 0 for a lost probe (review round fifteen: 20 July days of a soil at 0 moved
# the example site's GPP by -262 g C m-2 with respiration_driver = "tsoil").
_CURTAIN_JUMP = 5.0
# A quiet soil, not a stopped probe (round falsealarm53): a soil under snow, or deep under
# a closed canopy, loses its daily cycle (conduction damps each period by exp(-z / d),
# and a snow pack's own low diffusivity damps the surface's; Campbell & Norman 1998,
# ch. 8-9 (m)) and drifts by hundredths of a K a day, so a logger at 0.1 K writes one
# value for days as it crosses one step of its resolution (an invented tundra soil at
# -1.4 °C for 2.3 days under snow, round falsealarm53). A held value is evidence of a
# stopped probe only where the soil beside it moves more than that: a run is excepted
# where every present record of the day before it and of the day after it lies within
# this many steps of the logger's resolution (the smallest change between consecutive
# values) of the run's value: no daily cycle either side, and entered and left by a step
# of the resolution. A probe that stops writes its last value while the soil moves on,
# and resumes with the difference as a jump; one stopped in a soil that moved less than
# that wrote what it would have read within its resolution.
_QUIET_STEPS = 2
# ... and a soil that leaves a held value as a snow pack goes (round falsealarm58): its
# first step out is the start of a ramp, a newly bare surface warming over the hours of
# a day and that warming arriving at depth smoothed (over a time of order z^2 / kappa,
# about an hour at 5 cm for kappa 0.5e-6 m2 s-1; Campbell & Norman 1998, ch. 8 (m)), so
# the next records move on the same way by steps as large (the first step no larger
# than the largest of them; an abrupt change at the surface would give a first step
# larger than the next, and stays named); a probe resuming after days stopped
# writes the stop's whole change in one step, larger than the soil's changes after it
# unless the soil moved by less than one such change over the stop (its held values then
# off by less). The number of records after the first step that must continue it:
_THAW_RAMP = 3
# Repeated records (our choice): a day or more of consecutive records whose NEE and
# every driver read equal, value for value, the records a fixed lag of a day or more
# earlier. Measured records never repeat so (the last digits of a flux and a
# temperature move from record to record); a logger memory replayed or a block of
# rows pasted twice does.
_REPEATED_DAYS = 1.0
_REPEATED_VARIABLES = ("nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh")
# NEE alone pasted over other days (a month of the flux column copied while the drivers
# were not, or a day whose measured records are fewer than a day of records): half a
# day of records' worth of measured NEE in a row, with at least half as many distinct
# values, each equal to the NEE a whole number of days (up to a year and a day) earlier.
# Two measured fluxes agree in all their written digits rarely (a resolution step of
# 0.001 µmol m-2 s-1 over a spread of several µmol m-2 s-1), so 24 in a row do only in
# a copy; distinct values keep out a stuck or zero-filled run (named above). Our choice.
_REPEATED_NEE_SHARE_OF_DAY = 0.5
_REPEATED_NEE_MAX_LAG_DAYS = 366
# The same at a lag of any whole number of records (a column pasted one row off, or at an
# offset of days and hours: a spreadsheet's paste needs no whole day): measured values
# are keyed by runs of this many in a row, so a copy is found in one pass over the record
# rather than by comparing every lag. Eight written values of a flux agree with eight
# others by chance about never, and half a day of them in a row (as above) never. Our
# choice.
_REPEATED_NEE_KEY_VALUES = 8
# Night-mask check (our choice): with the sun below the horizon a pyranometer reads
# about 0 (a few W m-2 of thermal offset, negative or positive); Rg at or above the
# night threshold in more than half of at least a day of such records is an offset.
_DARK_ABOVE_SHARE = 0.5
_DARK_MIN_RECORDS = 48
_STUCK_SUNLIT_RECORDS = 12
_CHANGE_POINT_BINS = 50       # the change-point detector's u* bins (fluxpart.ustar default)
_PER_CLASS = 3                # records per u* class or bin (fluxpart.ustar default)


@dataclass(frozen=True)
class Finding:
    """One condition that makes a stage fail or fall back.

    Attributes
    ----------
    stage : str
        The pipeline stage affected.
    message : str
        What was found and what to do, in one line.
    fatal : bool
        True where the stage cannot run, so ``run`` stops before fitting.
    """

    stage: str
    message: str
    fatal: bool

    def __str__(self) -> str:
        return f"{self.stage}: {self.message}"


def _windows(days: np.ndarray, length: float, step: float):
    """Start and end [days since the first record] of moving windows over the record."""
    end = float(days.max()) if days.size else 0.0
    count = max(1, int(np.ceil((end - length) / step)) + 1) if end > length else 1
    starts = np.arange(count) * step
    return starts, starts + length


def _window_counts(days: np.ndarray, usable: np.ndarray, length: float, step: float):
    """Usable records in each moving window, and the windows' starts."""
    starts, ends = _windows(days, length, step)
    cumulative = np.concatenate([[0], np.cumsum(usable)])
    first = np.searchsorted(days, starts, side="left")
    last = np.searchsorted(days, ends, side="left")
    return cumulative[last] - cumulative[first], starts, first, last


def _constant(frame: pd.DataFrame, temperature: str) -> list:
    findings = []
    for name, (stage, fatal) in _CONSTANT.items():
        if name not in frame.columns or (name in ("tair", "tsoil") and name != temperature):
            continue
        values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
        present = values[np.isfinite(values)]
        if present.size == 0:
            continue                     # an empty column is the reader's error
        distinct = np.unique(present)
        if distinct.size < _DISTINCT_VALUES:
            shown = ", ".join(f"{v:g}" for v in distinct)
            findings.append(Finding(stage, (
                f"{name} is constant ({present.size} values, all {shown}): a stuck or "
                f"unconnected sensor, or a placeholder column; the stage needs a varying "
                f"{name}{_CONSTANT_CONSEQUENCE.get(name, '')}"), fatal))
    return findings


def _wind_as_ustar(frame: pd.DataFrame, interval_minutes: float, sources=None) -> list:
    """A u* whose yearly median is that of a wind speed (see ``_WIND_AS_USTAR_MEDIAN``)."""
    if "ustar" not in frame.columns:
        return []
    ustar = pd.to_numeric(frame["ustar"], errors="coerce")
    ustar = ustar[np.isfinite(ustar.to_numpy(dtype=float))]
    years = ustar.groupby(pd.DatetimeIndex(ustar.index).year)
    median, count = years.median(), years.size()
    judged = count >= _WIND_AS_USTAR_DAYS * 1440.0 / interval_minutes
    windy = median[judged & (median > _WIND_AS_USTAR_MEDIAN)]
    if windy.empty:
        return []
    year = int(windy.idxmax())
    values = ustar[pd.DatetimeIndex(ustar.index).year == year].to_numpy(dtype=float)
    column = (sources or {}).get("ustar")
    setting = ("[input.columns] ustar" + (f" = {column!r}" if column else ""))
    return [Finding("u* filter", (
        f"ustar in {year} has a median of {windy[year]:.2f} m s-1 (95th percentile "
        f"{np.percentile(values, 95):.2f}, largest {values.max():.2f}) in {values.size} "
        f"records: friction velocity over land keeps a year's median below "
        f"{_WIND_AS_USTAR_MEDIAN:g} m s-1 (u* = κU/ln((z-d)/z0), at most about a quarter of "
        "the wind speed U), so this reads as wind speed (or u* in cm s-1) and its threshold "
        f"would keep calm nights as measured; {setting} must name the friction velocity "
        "column (m s-1)"), True)]


def _runs(values: np.ndarray, min_length: float = 2):
    """Runs of equal consecutive present values (gaps skipped) of at least `min_length`
    (and 2) records: their present positions."""
    present = np.flatnonzero(np.isfinite(values))
    if present.size < 2:
        return []
    kept = values[present]
    breaks = np.flatnonzero(kept[1:] != kept[:-1]) + 1
    starts = np.concatenate([[0], breaks])
    ends = np.concatenate([breaks, [kept.size]])
    # most runs are short (zeros at night, repeated readings); only the long ones are sliced
    long = np.flatnonzero(ends - starts >= max(min_length, 2))
    return [present[starts[i]:ends[i]] for i in long]


def _jumps(values: np.ndarray, positions: np.ndarray, limit: float) -> bool:
    """Whether the record just before or just after a run differs from it by > `limit`."""
    value = values[positions[0]]
    beside = [positions[0] - 1, positions[-1] + 1]
    return any(0 <= i < values.size and np.isfinite(values[i]) and abs(values[i] - value) > limit
               for i in beside)


def _resolution(values: np.ndarray) -> float:
    """The logger's resolution: the smallest change between consecutive present values
    (NaN where none changes)."""
    kept = values[np.isfinite(values)]
    steps = np.abs(np.diff(kept))
    steps = steps[steps > 1e-9]
    return float(steps.min()) if steps.size else np.nan


def _quiet_beside(values: np.ndarray, positions: np.ndarray, resolution: float,
                  per_day: int) -> bool:
    """Whether the soil beside a run is quiet (see ``_QUIET_STEPS``): the present values
    in the day before it and the day after it (half of each day present at least) all
    lie within :data:`_QUIET_STEPS` steps of `resolution` of the run's value, or they
    drift without a daily cycle (each day within that many steps of its own straight
    line) and meet the run by one step of the resolution at most on both sides, not in
    opposite directions faster than a soil turning within one reading allows
    (:func:`_turned_within`), or the day before is quiet so and the soil leaves the run
    as a ramp (:func:`_leaves_as_a_ramp`, a snow pack going)."""
    first, last = int(positions[0]), int(positions[-1])
    length = int(per_day)
    value = values[first]
    limit = (_QUIET_STEPS + 0.5) * resolution
    windows = (values[max(first - length, 0):first], values[last + 1:last + 1 + length])
    kept = [window[np.isfinite(window)] for window in windows]
    if any(window.size < length / 2 for window in kept):
        return False
    if all(np.abs(window - value).max() <= limit for window in kept):
        return True
    # a drift (round falsealarm57): a soil insulated by an early snow pack, or deep in a
    # permafrost's active layer in autumn, crosses several steps in the day before a run
    # with no daily cycle; a probe stopped in a drifting soil resumes off by the drift
    # over the run (more than a step), one that held the soil's value resumes beside it
    slopes = [_line_slope(window, limit) for window in windows]
    drifting = [abs(present[-1 if side == 0 else 0] - value) <= 1.5 * resolution
                and slope is not None
                for side, (slope, present) in enumerate(zip(slopes, kept, strict=True))]
    if all(drifting):
        # not across a turn faster than one reading allows (round review84)
        return not _turned_within([slope * length for slope in slopes],
                                  (last - first + 1) / length, resolution)
    # the snow leaves (round falsealarm58): a soil quiet in the day before (held or
    # drifting, as above) that leaves the run as a ramp, its first step out followed by
    # _THAW_RAMP changes the same way, one of them at least as large: conduction carries
    # a surface's warming down over hours, while a probe resuming after a stop writes
    # the whole stop's change in one step and then the soil's ordinary changes
    quiet_before = drifting[0] or np.abs(kept[0] - value).max() <= limit
    return quiet_before and _leaves_as_a_ramp(values[last:last + _THAW_RAMP + 2], resolution)


def _line_slope(window: np.ndarray, limit: float) -> float | None:
    """The slope [per record] of the present values' least-squares straight line in time
    where every present value of `window` (consecutive records, NaN where missing) lies
    within `limit` of it; None where one does not."""
    at = np.flatnonzero(np.isfinite(window))
    slope, intercept = np.polyfit(at, window[at], 1)
    if np.abs(window[at] - (slope * at + intercept)).max() > limit:
        return None
    return float(slope)


def _leaves_as_a_ramp(values: np.ndarray, resolution: float) -> bool:
    """Whether a run's last value and the records after it (`values`, the run's last value
    first) leave the run as a ramp: a first step of more than a step and a half of
    `resolution`, then :data:`_THAW_RAMP` changes of its sign, the largest of them no
    smaller than it (within half a step)."""
    if values.size < _THAW_RAMP + 2 or not np.isfinite(values).all():
        return False
    changes = np.diff(values)
    first, after = changes[0], changes[1:]
    return bool(abs(first) > 1.5 * resolution and (np.sign(after) == np.sign(first)).all()
                and np.abs(after).max() >= abs(first) - 0.5 * resolution)


def _turned_within(drifts, days: float, resolution: float) -> bool:
    """Whether a soil drifting by `drifts` [K per day] in the day before a run and the
    day after it, in opposite directions, turned within the run faster than one reading
    held for `days` allows (round review84).

    Conduction smooths a soil's temperature, so near a turn it follows a parabola,
    ``T = T0 + a t**2`` (Campbell & Norman 1998, ch. 8 (m)). A soil that stays within one
    step of `resolution` for the `days` of a run has ``a <= 4 resolution / days**2``, and
    changes over the day beside the run by ``a (days + 1)`` at most: a soil cooling 0.3 K
    a day before a run of 20 days and warming 0.3 K a day after it went through a cold
    spell that a probe stopped for those 20 days missed (a logger of 0.1 K allows 0.01 K
    a day there). A drift reversed within one step a day is not judged (a held value's
    rounding tilts a day's fit by that much), nor a drift on one side only (a soil that
    stopped drifting under snow).
    """
    before, after = drifts
    allowed = max(resolution, 4.0 * resolution * (days + 1.0) / days ** 2)
    return before * after < 0 and min(abs(before), abs(after)) > allowed


def _stuck(frame: pd.DataFrame, potential, interval_minutes: float) -> list:
    """Sensors that repeat one value for days: their records enter as measured."""
    index = pd.DatetimeIndex(frame.index)
    per_day = 1440.0 / interval_minutes
    sun_up = np.asarray(potential, dtype=float) > _STUCK_SUN_UP
    findings = []
    for name, (days_needed, natural) in _STUCK.items():
        if name not in frame.columns:
            continue
        values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
        resolution = _resolution(values) if name == "tsoil" else np.nan
        stuck = []
        for positions in _runs(values, min_length=days_needed * per_day):
            value = values[positions[0]]
            if value in natural or (name == "tsoil" and abs(value) <= _ZERO_CURTAIN):
                if name != "tsoil" or not _jumps(values, positions, _CURTAIN_JUMP):
                    continue
            if name == "tsoil" and _quiet_beside(values, positions, resolution,
                                                  round(per_day)):
                continue
            sunlit = int(sun_up[positions].sum())
            if name == "rg" and sunlit < _STUCK_SUNLIT_RECORDS:
                continue
            stuck.append((positions.size, int(positions[0]), int(positions[-1]), value, sunlit))
        if not stuck:
            continue
        length, first, last, value, sunlit = max(stuck)
        span = (index[last] - index[first]) / pd.Timedelta(days=1) + interval_minutes / 1440
        sun = f", {sunlit} of them with the sun up" if name == "rg" else ""
        more = (f"; {len(stuck)} such runs, {sum(run[0] for run in stuck)} records in all"
                if len(stuck) > 1 else "")
        findings.append(Finding(f"input ({name})", (
            f"{name} stays at exactly {value:g} for {span:.1f} days "
            f"({index[first]:%Y-%m-%d %H:%M} .. {index[last]:%Y-%m-%d %H:%M}, {length} "
            f"records{sun}){more}: a stuck, dead or disconnected sensor (or a placeholder "
            "value) reads like this, and the values would enter as measured; mark them "
            "missing in a copy of the file"), False))
    return findings


def _column_faults(screened: pd.DataFrame, potential, interval_minutes: float,
                   sources=None, is_night=None, written=None) -> list:
    """Air and soil temperature swapped, NEE shifted against Rg or of the opposite sign in
    some months or weeks or interpolated over its gaps or with one sign removed next to
    0, air temperature shifted against RH and VPD (:mod:`.column_faults`)."""
    findings = []
    names = {**{name: name for name in screened.columns}, **(sources or {})}
    if {"tair", "tsoil"} <= set(screened.columns):
        index = pd.DatetimeIndex(screened.index)
        offset = int(round((index[0] - index[0].normalize()) / pd.Timedelta(
            minutes=interval_minutes))) if len(index) else 0
        text = swapped_temperatures(screened["tair"].to_numpy(dtype=float),
                                    screened["tsoil"].to_numpy(dtype=float),
                                    interval_minutes, offset, names)
        if not text:
            # months of a record whose year keeps the rule (round mistakes23)
            text = swapped_temperatures_in_months(screened["tair"].to_numpy(dtype=float),
                                                  screened["tsoil"].to_numpy(dtype=float),
                                                  index, interval_minutes, names)
        if text:
            findings.append(Finding("input (tair, tsoil)", text, False))
        else:
            # a deep probe's soil without a daily cycle mapped as tsoil (round mistakes60)
            text = soil_depth.deep_soil_probe(screened["tair"].to_numpy(dtype=float),
                                              screened["tsoil"].to_numpy(dtype=float),
                                              index, names)
            if text:
                findings.append(Finding(soil_depth.STAGE, text, False))
        # one sensor written under both headers (round mistakes24)
        text = same_temperature_columns(screened["tair"].to_numpy(dtype=float),
                                        screened["tsoil"].to_numpy(dtype=float),
                                        index, interval_minutes, names)
        if text:
            findings.append(Finding("input (tair = tsoil)", text, False))
        # a stretch of another file's records pasted in (round mistakes44)
        text = spliced_records.spliced_records(screened["tair"].to_numpy(dtype=float),
                                               screened["tsoil"].to_numpy(dtype=float),
                                               index, names)
        if text:
            findings.append(Finding(spliced_records.STAGE, text, False))
        else:
            # a lone joint where two files meet (round mistakes51)
            text = spliced_records.file_joint(screened["tsoil"].to_numpy(dtype=float),
                                              index, names)
            if text:
                findings.append(Finding(spliced_records.FILE_STAGE, text, False))
    if {"nee", "rg"} <= set(screened.columns):
        # a shift of hours first (round mistakes23): where one beyond two hours is clearly
        # best, nee_lag would name only the widest of its own (two hours)
        text = nee_hour_shift(screened["nee"].to_numpy(dtype=float),
                              screened["rg"].to_numpy(dtype=float), potential,
                              interval_minutes, names)
        if not text:
            text = nee_lag(screened["nee"].to_numpy(dtype=float),
                           screened["rg"].to_numpy(dtype=float), potential, interval_minutes,
                           names)
        if not text:
            # a shift from some month on only, diluted over the whole record (mistakes23)
            text = nee_shift_from_month(screened["nee"].to_numpy(dtype=float),
                                        screened["rg"].to_numpy(dtype=float), potential,
                                        screened.index, interval_minutes, names)
        if text:
            findings.append(Finding("input (nee)", text, False))
        else:
            text = nee_day_shift(screened["nee"].to_numpy(dtype=float),
                                 screened["rg"].to_numpy(dtype=float), potential,
                                 interval_minutes, names)
            if text:       # a few records off where they beat every day (leftovers56)
                findings.append(Finding("input (nee)" if RECORD_SHIFT_WORDS in text
                                        else "input (nee days)", text, False))
        text = months_rising_with_light(screened["nee"].to_numpy(dtype=float),
                                        screened["rg"].to_numpy(dtype=float), potential,
                                        screened.index, names)
        if text:
            findings.append(Finding("input (nee sign)", text, False))
        elif "tair" in screened.columns:
            # negated by day only: nights a release, no month falling with light (mistakes30)
            text = day_sign.day_sign_reversed(
                screened["nee"].to_numpy(dtype=float), screened["rg"].to_numpy(dtype=float),
                screened["tair"].to_numpy(dtype=float), potential, screened.index, names)
            if text:
                findings.append(Finding(day_sign.STAGE, text, False))
            else:
                # no uptake in a year's sunlight: another gas's flux (round mistakes47)
                text = sunlit_uptake.no_sunlit_uptake(
                    screened["nee"].to_numpy(dtype=float),
                    screened["rg"].to_numpy(dtype=float),
                    screened["tair"].to_numpy(dtype=float), potential, screened.index, names)
                if text:
                    findings.append(Finding(sunlit_uptake.STAGE, text, False))
    if {"nee", "rg"} <= set(screened.columns) and not any(
            finding.stage.startswith("input (nee") for finding in findings):
        # NEE beside another record's weather: it answers none of it (round mistakes45)
        text = weather_pairing.weather_of_another_record(
            screened["nee"].to_numpy(dtype=float), screened["rg"].to_numpy(dtype=float),
            screened.index, *(screened[c].to_numpy(dtype=float) if c in screened.columns
                              else None for c in ("vpd", "tair")), names=names)
        if text:
            findings.append(Finding(weather_pairing.STAGE, text, False))
    if "rg" in screened.columns and potential is not None:
        text = shaded_rg(screened["rg"].to_numpy(dtype=float), potential, screened.index,
                         names)
        if text:
            findings.append(Finding("input (rg shaded)", text, False))
        text = rg_blank_in_the_dark(screened["rg"].to_numpy(dtype=float), potential, names)
        if text:
            findings.append(Finding("input (rg dark)", text, False))
        # a lost value written as 0 with the sun well up (round mistakes27)
        text = rg_zeros.rg_zero_in_daylight(screened["rg"].to_numpy(dtype=float), potential,
                                            screened.index, names)
        if text:
            findings.append(Finding("input (rg zeros)", text, False))
        # a run of months too dim for any sky: a sensor changed mid-record (round mistakes29)
        tair = (screened["tair"].to_numpy(dtype=float) if "tair" in screened.columns
                else None)
        text = rg_dim.dim_rg_months(screened["rg"].to_numpy(dtype=float), potential,
                                    screened.index, names, tair)
        if text:
            findings.append(Finding("input (rg dim)", text, False))
    if {"tair", "rg"} <= set(screened.columns):
        # an air temperature without a diurnal course (round mistakes25)
        text = flat_air_temperature(screened["tair"].to_numpy(dtype=float),
                                    screened["rg"].to_numpy(dtype=float), potential,
                                    screened.index, interval_minutes, names)
        if text:
            findings.append(Finding("input (tair flat)", text, False))
    if "nee" in screened.columns:
        text = interpolated_nee(screened["nee"].to_numpy(dtype=float), interval_minutes,
                                screened.index, names)
        if text:
            findings.append(Finding("input (nee filled)", text, False))
        # values beyond a plausibility limit removed (round mistakes32)
        text = nee_limits.cut_nee(screened["nee"].to_numpy(dtype=float), screened.index,
                                    names, written)
        if text:
            findings.append(Finding(nee_limits.STAGE, text, False))
        if is_night is not None:
            text = censored_nee(screened["nee"].to_numpy(dtype=float), is_night,
                                screened.index, names)
            if text:
                findings.append(Finding("input (nee one sign)", text, False))
            # a running mean of the records written as NEE (round mistakes28)
            text = nee_smoothing.smoothed_nee(screened["nee"].to_numpy(dtype=float),
                                              is_night, names, screened.index)
            if text:
                findings.append(Finding("input (nee smoothed)", text, False))
            if "ustar" in screened.columns:
                # night NEE filtered by a u* threshold before it was read (mistakes42)
                text = ustar_prefilter.nee_filtered_by_ustar(
                    screened["nee"].to_numpy(dtype=float),
                    screened["ustar"].to_numpy(dtype=float), is_night, names,
                    screened.index)
                if text:
                    findings.append(Finding(ustar_prefilter.STAGE, text, False))
    if {"vpd", "rg", "tair"} <= set(screened.columns):
        # VPD 0 in bright sunshine: a rain gauge or a lost sensor as vpd (mistakes42)
        text = vpd_zero.vpd_zero_in_sunshine(screened["vpd"].to_numpy(dtype=float),
                                             screened["rg"].to_numpy(dtype=float),
                                             screened["tair"].to_numpy(dtype=float),
                                             screened.index, names)
        if text:
            findings.append(Finding(vpd_zero.STAGE, text, False))
    if {"nee", "rg", "tair"} <= set(screened.columns):
        # uptake in bright frozen weather: an open-path flux without its density terms
        # (round mistakes53)
        text = frozen_uptake.frozen_daylight_uptake(screened["nee"].to_numpy(dtype=float),
                                                    screened["rg"].to_numpy(dtype=float),
                                                    screened["tair"].to_numpy(dtype=float),
                                                    names)
        if text:
            findings.append(Finding(frozen_uptake.STAGE, text, False))
    for name in PLACEHOLDER_VARIABLES:
        # one value written into gap after gap (round mistakes26)
        if name in screened.columns:
            text = placeholder_value(screened[name].to_numpy(dtype=float), name,
                                     screened.index, names)
            if text:
                findings.append(Finding(f"input ({name} filler)", text, False))
    for name in ("tair", "tsoil"):
        if name in screened.columns:
            text = zero_coded_temperature(screened[name].to_numpy(dtype=float), name,
                                          screened.index, names)
            if text:
                findings.append(Finding(f"input ({name} zeros)", text, False))
    if {"tair", "rh", "vpd"} <= set(screened.columns):
        text = tair_lag(screened["tair"].to_numpy(dtype=float),
                        screened["rh"].to_numpy(dtype=float),
                        screened["vpd"].to_numpy(dtype=float), interval_minutes, names)
        if text:
            findings.append(Finding("input (tair)", text, False))
        else:
            text = delayed_tair(screened["tair"].to_numpy(dtype=float),
                                screened["rh"].to_numpy(dtype=float),
                                screened["vpd"].to_numpy(dtype=float), interval_minutes, names)
            if not text:
                text = delayed_tair_in_a_year(
                    screened["tair"].to_numpy(dtype=float), screened["rh"].to_numpy(dtype=float),
                    screened["vpd"].to_numpy(dtype=float), screened.index, interval_minutes,
                    names)
            if text:
                findings.append(Finding("input (tair delayed)", text, False))
            # the air temperature whole days from the humidity (round mistakes28)
            text = tair_days.tair_day_shift(screened["tair"].to_numpy(dtype=float),
                                            screened["rh"].to_numpy(dtype=float),
                                            screened["vpd"].to_numpy(dtype=float),
                                            interval_minutes, names)
            if text:
                findings.append(Finding("input (tair days)", text, False))
        text = dew_point_as_tair(screened["tair"].to_numpy(dtype=float),
                                 screened["rh"].to_numpy(dtype=float),
                                 screened["vpd"].to_numpy(dtype=float), names)
        if text:
            findings.append(Finding("input (tair dew point)", text, False))
        text = vapour_pressure_as_vpd(screened["tair"].to_numpy(dtype=float),
                                      screened["rh"].to_numpy(dtype=float),
                                      screened["vpd"].to_numpy(dtype=float), names)
        if text:
            findings.append(Finding("input (vpd vapour pressure)", text, False))
        # the VPD column exchanged with another for some months (round layouts28): named
        # as such, not by its side effect on the temperature VPD and RH imply
        humidity = (screened["tair"].to_numpy(dtype=float),
                    screened["rh"].to_numpy(dtype=float), screened["vpd"].to_numpy(dtype=float),
                    {name: screened[name].to_numpy(dtype=float)
                     for name in ("ustar", "tsoil", "rg", "nee") if name in screened.columns},
                    screened.index, names)
        exchanged = vpd_exchanged_in_months(*humidity)
        if exchanged:
            findings.append(Finding("input (vpd exchanged)", exchanged, False))
        else:
            # the whole record's mapping exchanged, a certain mistake (round mistakes54)
            exchanged = vpd_mapped_to_another(*humidity)
            if exchanged:
                findings.append(Finding("input (vpd exchanged)", exchanged, True))
        soil = None
        if "tsoil" in screened.columns and not exchanged:
            # a VPD computed with the soil temperature, named by its cause where the
            # soil column tells it (round polish48; the sun-heated check blamed tair)
            soil = vpd_soil.vpd_from_soil_temperature(
                screened["tair"].to_numpy(dtype=float), screened["rh"].to_numpy(dtype=float),
                screened["vpd"].to_numpy(dtype=float), screened["tsoil"].to_numpy(dtype=float),
                names)
            if soil:
                findings.append(Finding(vpd_soil.STAGE, soil, False))
        if "rg" in screened.columns and not exchanged and not soil:
            # a thermometer heated by the sun, or a VPD of another temperature (mistakes26)
            text = sun_heated_tair(screened["tair"].to_numpy(dtype=float),
                                   screened["rh"].to_numpy(dtype=float),
                                   screened["vpd"].to_numpy(dtype=float),
                                   screened["rg"].to_numpy(dtype=float), names,
                                   screened.index)
            if text:
                findings.append(Finding("input (tair sunlit)", text, False))
        if not exchanged and not soil and not any(
                finding.stage.startswith("input (tair") for finding in findings):
            # an air temperature damped against the humidity's: a sonic's (mistakes50)
            text = damped_tair.damped_tair(screened["tair"].to_numpy(dtype=float),
                                           screened["rh"].to_numpy(dtype=float),
                                           screened["vpd"].to_numpy(dtype=float),
                                           interval_minutes, names, screened.index)
            if text:
                findings.append(Finding(damped_tair.STAGE, text, False))
    return findings


def _written_twice(frame: pd.DataFrame, potential, interval_minutes: float,
                   sources=None) -> list:
    """Columns holding values of twice the interval, each written in two records
    (:func:`.column_faults.values_written_twice`); Rg judged by day only."""
    names = {**{name: name for name in frame.columns}, **(sources or {})}
    potential = np.asarray(potential, dtype=float)
    findings = []
    for name in ("nee", "rg", "tair", "vpd", "rh", "tsoil", "ustar"):
        if name not in frame.columns:
            continue
        text = values_written_twice(frame[name].to_numpy(dtype=float), name,
                                    interval_minutes, potential > 0 if name == "rg" else None,
                                    names)
        if text:
            findings.append(Finding(f"input ({name} twice)", text, False))
    return findings


def _flags_as_data(frame: pd.DataFrame, sources=None) -> list:
    """Columns mapped as measured variables that hold a few whole-number codes
    (:func:`.column_faults.flag_as_measurement`)."""
    names = {**{name: name for name in frame.columns}, **(sources or {})}
    findings = []
    for name in ("nee", "rg", "tair", "vpd", "rh", "tsoil", "ustar", "ppfd"):
        if name in frame.columns:
            text = flag_as_measurement(frame[name].to_numpy(dtype=float), name, names)
            if text:
                findings.append(Finding(f"input ({name} flag)", text, False))
    return findings


def _gapless(frame: pd.DataFrame, interval_minutes: float, sources=None) -> list:
    """NEE present and accepted by the site flag over two months without a gap, read
    before the screening's spike test (:func:`.column_faults.gapless_nee`)."""
    if "nee" not in frame.columns:
        return []
    rejected = site_flag(frame["nee_flag"]) if "nee_flag" in frame.columns else None
    names = {**{name: name for name in frame.columns}, **(sources or {})}
    text = gapless_nee(frame["nee"].to_numpy(dtype=float), interval_minutes, frame.index,
                       rejected, names)
    return [Finding("input (nee gapless)", text, False)] if text else []


def _repeated_records(frame: pd.DataFrame, interval_minutes: float) -> list:
    """Runs of records that repeat, in every variable read, records a day or more earlier."""
    index = pd.DatetimeIndex(frame.index)
    per_day = 1440.0 / interval_minutes
    names = [n for n in _REPEATED_VARIABLES if n in frame.columns]
    if "nee" not in names or len(index) < 2 * per_day * _REPEATED_DAYS:
        return []
    values = frame[names].apply(pd.to_numeric, errors="coerce")
    measured = np.flatnonzero(np.isfinite(values["nee"].to_numpy(dtype=float)))
    if measured.size == 0:
        return []
    codes = pd.factorize(pd.util.hash_pandas_object(values.iloc[measured], index=False))[0]
    first = pd.Series(measured).groupby(codes).transform("min").to_numpy()
    lag = (measured - first).astype(float)
    lag[lag < per_day] = np.nan            # an original, or a stuck run (the check above)
    lags = np.full(len(index), np.nan)
    lags[measured] = lag
    runs = _runs(lags, min_length=_REPEATED_DAYS * per_day)
    if not runs:
        return []
    positions = max(runs, key=len)
    start, end = int(positions[0]), int(positions[-1])
    back = (index[start] - index[start - int(lags[start])]) / pd.Timedelta(days=1)
    more = (f"; {len(runs)} such runs, {sum(len(r) for r in runs)} records in all"
            if len(runs) > 1 else "")
    return [Finding("input (repeated records)", (
        f"{positions.size} records {index[start]:%Y-%m-%d %H:%M} .. {index[end]:%Y-%m-%d %H:%M} "
        f"repeat exactly, in {', '.join(names)}, the records {back:g} days earlier (from "
        f"{index[start - int(lags[start])]:%Y-%m-%d %H:%M}){more}: a logger memory read out "
        "twice or rows pasted twice reads like this, and the copies would enter as "
        "measured; mark them missing in a copy of the file"), False)]


def _copied_drivers(frame, records, shift) -> list:
    """The drivers (of ``_REPEATED_VARIABLES``) whose values at `records` equal, value for
    value, those `shift` records earlier: rows pasted twice rather than the flux alone."""
    drivers = [n for n in _REPEATED_VARIABLES if n != "nee" and n in frame.columns]
    return [n for n in drivers if np.array_equal(
        *(pd.to_numeric(frame[n], errors="coerce").to_numpy(dtype=float)[r]
          for r in (records, records - shift)), equal_nan=True)]


def _repeated_nee(frame: pd.DataFrame, interval_minutes: float) -> list:
    """Runs of measured NEE equal, value for value, to the NEE whole days earlier
    (the flux column pasted over other days; :func:`_repeated_records` names records
    that repeat in every variable)."""
    if "nee" not in frame.columns:
        return []
    index = pd.DatetimeIndex(frame.index)
    per_day = int(round(1440.0 / interval_minutes))
    nee = pd.to_numeric(frame["nee"], errors="coerce").to_numpy(dtype=float)
    needed = max(2, int(np.ceil(_REPEATED_NEE_SHARE_OF_DAY * per_day)))
    best = None
    finite = np.isfinite(nee)              # once, not twice per lag
    for days in range(1, min(_REPEATED_NEE_MAX_LAG_DAYS, (len(nee) - 1) // per_day) + 1):
        lag = days * per_day
        later, earlier = nee[lag:], nee[:-lag]
        # the equal pairs counted before the pairs both measured are taken (up to 366
        # lags: one comparison and one count each): NaN equals nothing, so the count is
        # that of the measured equal pairs, or more where both values are infinite; a
        # lag with fewer cannot hold a run of `needed` measured equal pairs
        equal = np.equal(later, earlier)
        if np.count_nonzero(equal) < needed:
            continue
        both = finite[lag:] & finite[:-lag]
        equal &= both
        # runs of equal pairs among the pairs where both are measured (gaps skipped)
        positions = np.flatnonzero(both)
        edges = np.diff(np.concatenate([[0], equal[positions].astype(np.int8), [0]]))
        starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
        for start, end in zip(starts, ends, strict=True):
            if end - start < needed:
                continue
            records = positions[start:end] + lag
            if np.unique(nee[records]).size < needed / 2:
                continue                                # a stuck or zero-filled run
            if best is None or records.size > best[1].size:
                best = (days, records)
    if best is None:
        return []
    days, records = best
    first, last = int(records[0]), int(records[-1])
    lag = days * per_day
    copied = _copied_drivers(frame, records, lag)
    others = (f", and so do {', '.join(copied)} (rows pasted twice)" if copied
              else ", while the drivers do not (the flux column pasted over other days)")
    return [Finding("input (repeated NEE)", (
        f"{records.size} measured NEE values {index[first]:%Y-%m-%d %H:%M} .. "
        f"{index[last]:%Y-%m-%d %H:%M} (interval starts) repeat exactly, value for value, "
        f"the NEE {days} day(s) earlier (from {index[first - lag]:%Y-%m-%d %H:%M}){others}: "
        "measured fluxes never repeat so, and the copies would enter as measured; mark them "
        "missing in a copy of the file"), False)]


def _copied_run(values: np.ndarray, interval_minutes: float) -> tuple | None:
    """The longest run of a column's present values equal, value for value, to its
    values a fixed number of records earlier.

    Parameters
    ----------
    values : numpy.ndarray
        One column of the record, in its unit (NaN = missing).
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    tuple or None
        ``(lag, records)``: the lag [records] and the positions of the run's present
        values (at least half a day of records' worth, with half as many distinct
        values, :data:`_REPEATED_NEE_SHARE_OF_DAY`), or None where no run is.

    Notes
    -----
    Present values are keyed by :data:`_REPEATED_NEE_KEY_VALUES` in a row (gaps
    skipped: a pasted block carries its gaps along) and each key's first occurrence
    found by hashing, so every lag is searched in one pass; a run is a sequence of keys
    whose first occurrences lie the same number of records earlier, checked value for
    value. A stuck or zero-filled run repeats itself at growing lags and has few
    distinct values, so is never a run here.

    References
    ----------
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136, 1-18 (m).
    """
    per_day = int(round(1440.0 / interval_minutes))
    needed = max(2, int(np.ceil(_REPEATED_NEE_SHARE_OF_DAY * per_day)))
    width = _REPEATED_NEE_KEY_VALUES
    positions = np.flatnonzero(np.isfinite(values))
    if positions.size < needed + width:
        return None
    windows = np.lib.stride_tricks.sliding_window_view(values[positions], width)
    codes = pd.factorize(pd.util.hash_pandas_object(pd.DataFrame(windows), index=False))[0]
    order = np.arange(codes.size)
    first = pd.Series(order).groupby(codes).transform("min").to_numpy()
    lag = positions[order] - positions[first]
    copied = (first < order) & (order - first >= width)
    # runs: maximal stretches of copied keys at one lag (found at once, not key by key)
    key = np.where(copied, lag, -1)
    bounds = np.flatnonzero(np.diff(key, prepend=-2, append=-2) != 0)
    best = None
    for start, end in zip(bounds[:-1], bounds[1:], strict=True):
        if key[start] < 0 or end - start - 1 + width < needed:
            continue                    # not copied, or too short to hold `needed` records
        records = positions[start:end - 1 + width]
        if (records.size >= needed and np.unique(values[records]).size >= needed / 2
                and np.array_equal(values[records], values[records - lag[start]])
                and (best is None or records.size > best[1].size)):
            best = (int(lag[start]), records)
    return best


def _repeated_nee_any_lag(frame: pd.DataFrame, interval_minutes: float) -> list:
    """Runs of measured NEE equal, value for value, to the measured NEE any number of
    records earlier (the flux column pasted over other records, not a whole number of
    days away: :func:`_repeated_nee` compares whole days only).

    Parameters
    ----------
    frame : pandas.DataFrame
        The record on its interval stamps, with column ``nee`` [µmol m-2 s-1] (NaN =
        missing) and any drivers of :data:`_REPEATED_VARIABLES`.
    interval_minutes : float
        Record interval [min].

    Returns
    -------
    list of Finding
        One warning (stage ``input (repeated NEE)``) for the longest run of at least
        half a day of records' worth of measured NEE (with half as many distinct
        values) equal to the measured NEE a fixed number of records earlier; empty
        where none is.

    Notes
    -----
    A measured flux carries a random error of tens of percent from record to record
    (Richardson et al. 2006 (m)), so its written digits never repeat over runs of
    records, at any lag; a block of a flux column pasted over other rows does, at the
    lag of the paste. Measured values are keyed by :data:`_REPEATED_NEE_KEY_VALUES` in
    a row (gaps skipped: a pasted block carries its gaps along) and each key's first
    occurrence found by hashing, so every lag is searched in one pass. A stuck or
    zero-filled run repeats itself at growing lags and has few distinct values, so is
    not named here (the stuck-sensor check names it). On the example site NEE of the
    first half-year pasted over the second one record off the whole days moved annual
    NEE by -262.3, nighttime GPP by -386.6 and Reco by -648.9 g C m-2 without a word
    (round mistakes25).

    References
    ----------
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136, 1-18 (m).
    """
    if "nee" not in frame.columns:
        return []
    index = pd.DatetimeIndex(frame.index)
    nee = pd.to_numeric(frame["nee"], errors="coerce").to_numpy(dtype=float)
    best = _copied_run(nee, interval_minutes)
    if best is None:
        return []
    shift, records = best
    first_record, last_record = int(records[0]), int(records[-1])
    copied_drivers = _copied_drivers(frame, records, shift)
    others = (f", and so do {', '.join(copied_drivers)} (rows pasted twice)" if copied_drivers
              else ", while the drivers do not (the flux column pasted over other records)")
    return [Finding("input (repeated NEE)", (
        f"{records.size} measured NEE values {index[first_record]:%Y-%m-%d %H:%M} .. "
        f"{index[last_record]:%Y-%m-%d %H:%M} (interval starts) repeat exactly, value for "
        f"value, the NEE {shift} records ({shift * interval_minutes / 1440.0:.2f} days) "
        f"earlier (from {index[first_record - shift]:%Y-%m-%d %H:%M}){others}: measured "
        "fluxes never repeat so, and the copies would enter as measured (against the time "
        "of day and the weather of their own records); mark them missing in a copy of "
        "the file"), False)]


# Drivers pasted over other records, as NEE above: u* (a 30-minute turbulence statistic
# with a sampling error of ten percent or more from record to record, Lenschow et al.
# 1994 (m)) and Rg (by day clouds and the sun's path, which moves with the declination
# from one day to the next, change its last digits; the night's zeros repeat at growing
# lags, so never make a run) decide which records are filtered, filled and fitted.
_REPEATED_DRIVERS = ("ustar", "rg")


def _repeated_drivers(frame: pd.DataFrame, interval_minutes: float, sources=None) -> list:
    """Runs of u* or Rg equal, value for value, to the same column's values a fixed
    number of records earlier (the column pasted over other records).

    Parameters
    ----------
    frame : pandas.DataFrame
        The record on its interval stamps, with any of the columns of
        :data:`_REPEATED_DRIVERS` (u* [m s-1], Rg [W m-2]; NaN = missing).
    interval_minutes : float
        Record interval [min].
    sources : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    list of Finding
        One warning per column (stage ``input (repeated <name>)``) with its longest run
        (:func:`_copied_run`); empty where none is.

    Notes
    -----
    On the example site u* of the first half-year pasted over the second one record
    off the whole days moved annual NEE by -31.7, nighttime GPP by -57.8 and Reco by
    -89.5 g C m-2, named only as a seasonal u* threshold; Rg so pasted whole days off
    moved nighttime GPP by -419.8 and daytime GPP by -400.3 g C m-2, named only as Rg
    above the potential radiation (round mistakes25). Records that repeat in every
    variable are named by :func:`_repeated_records`, and NEE by :func:`_repeated_nee`.

    References
    ----------
    Lenschow, D. H., Mann, J. and Kristensen, L. (1994). How long is long enough when
    measuring fluxes and other turbulence statistics? Journal of Atmospheric and
    Oceanic Technology 11, 661-673 (m).
    """
    index = pd.DatetimeIndex(frame.index)
    findings = []
    for name in _REPEATED_DRIVERS:
        if name not in frame.columns:
            continue
        values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
        best = _copied_run(values, interval_minutes)
        if best is None:
            continue
        shift, records = best
        first_record, last_record = int(records[0]), int(records[-1])
        column = (sources or {}).get(name, name)
        findings.append(Finding(f"input (repeated {name})", (
            f"{records.size} values of {name} (column {column!r}) "
            f"{index[first_record]:%Y-%m-%d %H:%M} .. {index[last_record]:%Y-%m-%d %H:%M} "
            f"(interval starts) repeat exactly, value for value, those {shift} records "
            f"({shift * interval_minutes / 1440.0:.2f} days) earlier (from "
            f"{index[first_record - shift]:%Y-%m-%d %H:%M}), while NEE does not: a "
            "measured column never repeats so over half a day of records, so the column "
            "looks pasted over other records, and the copies would filter, fill and fit "
            "NEE against another time's values; mark them missing in a copy of the file"),
            False))
    return findings


def _long_gaps(index: pd.DatetimeIndex, nee: np.ndarray, interval_minutes: float) -> list:
    """Gaps of measured NEE longer than the largest full window of quality A.

    Within such a gap some records have no measured NEE within ±14 days, so the
    marginal distribution sampling fills them from windows widened up to ±140 days
    (quality C, Reichstein, gap-filling flow chart, workshop slides 2004): the sums
    over the gap rest on the fluxes of other weeks or seasons. Without a note a whole
    month missing reads as a complete year.
    """
    missing = ~np.isfinite(nee)
    if missing.all():
        return []
    starts, records = gap_runs(missing)
    lengths = records * interval_minutes / 1440.0
    long = np.flatnonzero(lengths > QUALITY_A_WINDOW_DAYS)
    if long.size == 0:
        return []
    longest = long[np.argmax(lengths[long])]
    first, last = index[starts[longest]], index[starts[longest] + records[longest] - 1]
    return [Finding("gap filling", (
        f"{long.size} gap(s) of measured NEE longer than {QUALITY_A_WINDOW_DAYS:g} days "
        f"({lengths[long].sum():.1f} days in all), the longest {lengths[longest]:.1f} days "
        f"({first:%Y-%m-%d %H:%M} .. {last:%Y-%m-%d %H:%M}): its middle lies more than "
        f"{QUALITY_A_WINDOW_DAYS / 2:g} days from any measured NEE and is filled from other "
        "weeks or seasons (quality C), so sums over it are weak evidence (share_filled_c "
        "in annual.parquet)"), False)]


def _long_night_gaps(index: pd.DatetimeIndex, nee: np.ndarray, is_night: np.ndarray) -> list:
    """Runs of night records without measured NEE spanning more than the quality-A window.

    Night gaps are filled from night records only (Falge et al. 2001,
    :mod:`fluxpart.gapfill`), so where every night of weeks is missing while the days
    are measured, their respiration comes from nights of other seasons at the same air
    temperature: a gap of the whole record (:func:`_long_gaps`) never shows it.
    """
    nights = np.flatnonzero(is_night)
    if nights.size == 0:
        return []
    missing = ~np.isfinite(nee[nights])
    if missing.all():
        return []
    starts, records = gap_runs(missing)
    first = index[nights[starts]]
    last = index[nights[starts + records - 1]]
    lengths = ((last - first) / pd.Timedelta(days=1)).to_numpy()
    long = np.flatnonzero(lengths > QUALITY_A_WINDOW_DAYS)
    if long.size == 0:
        return []
    longest = long[np.argmax(lengths[long])]
    return [Finding("gap filling (night)", (
        f"{long.size} stretch(es) longer than {QUALITY_A_WINDOW_DAYS:g} days with no measured "
        f"night NEE ({int(records[long].sum())} night records), the longest "
        f"{first[longest]:%Y-%m-%d} .. {last[longest]:%Y-%m-%d}: the nights in their middle lie "
        f"more than {QUALITY_A_WINDOW_DAYS / 2:g} days from any measured night and are filled "
        "from nights of other weeks or seasons (quality C), so the respiration and NEE summed "
        "over them are weak evidence (share_filled_c in annual.parquet)"), False)]


def _long_driver_gaps(index: pd.DatetimeIndex, frame: pd.DataFrame, nee: np.ndarray,
                      interval_minutes: float, sources=None) -> list:
    """Gaps of one driver longer than the quality-A window while NEE was measured.

    The drivers' gaps are filled by marginal distribution sampling too (longer than
    ``gapfill_interpolation_hours``), from windows widened up to 140 days (quality C,
    Reichstein et al. 2005, the flow chart's widening): over weeks without a probe the
    respiration temperature, and the Rg, Tair and VPD that the NEE fills are matched on,
    are other weeks' values. An outage of every sensor is named by :func:`_long_gaps`;
    a driver whose own outage lies where NEE was measured for at least half its records
    was silent (review round eighteen: 60 days without the soil probe moved the
    nighttime Reco of those days by -7 %).
    """
    out = []
    measured_before = np.concatenate([[0], np.cumsum(np.isfinite(nee))])
    for name in ("tsoil", "tair", "vpd", "rg"):
        if name not in frame.columns:
            continue
        values = frame[name].to_numpy(dtype=float)
        if not np.isfinite(values).any():
            continue
        starts, records = gap_runs(~np.isfinite(values))
        lengths = records * interval_minutes / 1440.0
        measured = (measured_before[starts + records] - measured_before[starts]) / records
        long = np.flatnonzero((lengths > QUALITY_A_WINDOW_DAYS) & (measured >= 0.5))
        if long.size == 0:
            continue
        longest = long[np.argmax(lengths[long])]
        first = index[starts[longest]]
        last = index[starts[longest] + records[longest] - 1]
        column = (sources or {}).get(name, name)
        out.append(Finding("gap filling (drivers)", (
            f"{column!r} ({name}) has {long.size} gap(s) longer than "
            f"{QUALITY_A_WINDOW_DAYS:g} days while NEE was measured, the longest "
            f"{lengths[longest]:.1f} days ({first:%Y-%m-%d} .. {last:%Y-%m-%d}): filled from "
            f"other weeks or seasons (quality C, {name}_fill_quality in timeseries.parquet), so "
            "the fluxes that rest on it there (Reco where it drives respiration, NEE fills "
            "matched on it) are weak evidence"), False))
    return out


def _dark_rg(frame: pd.DataFrame, potential, config) -> list:
    """Rg that stays above the night threshold while the sun is down (an offset)."""
    if "rg" not in frame.columns:
        return []
    rg = pd.to_numeric(frame["rg"], errors="coerce").to_numpy(dtype=float)
    dark = (np.asarray(potential, dtype=float) <= 0.0) & np.isfinite(rg)
    if dark.sum() < _DARK_MIN_RECORDS:
        return []
    above = rg[dark] >= config.night_rg_threshold
    if above.mean() <= _DARK_ABOVE_SHARE:
        return []
    return [Finding("night mask", (
        f"Rg is at or above night_rg_threshold = {config.night_rg_threshold:g} W m-2 in "
        f"{100 * (above.mean()):.0f} % of the {int(dark.sum())} records with the sun below the "
        "horizon "
        f"(median {float(np.median(rg[dark])):.3g} W m-2), so few records count as night: a "
        "pyranometer offset, a mislabelled Rg column or a wrong [site] position; correct the "
        "offset in a copy of the file, or raise [processing] night_rg_threshold above it"),
        False)]


def _e0(days, index, usable, temperature, config, nee) -> list:
    counts, starts, first, last = _window_counts(days, usable, config.e0_window_days,
                                                 config.e0_window_step_days)
    spans = np.zeros(len(starts))
    values = np.where(usable, temperature, np.nan)
    for i, (a, b) in enumerate(zip(first, last, strict=True)):
        if b > a and counts[i] > 0:
            spans[i] = np.nanmax(values[a:b]) - np.nanmin(values[a:b])
    good = (counts >= config.e0_min_points) & (spans >= config.e0_min_temperature_range)
    origin = index[0].normalize()
    centres = origin + pd.to_timedelta(starts + config.e0_window_days / 2.0, unit="D")
    window_start = origin + pd.to_timedelta(starts, unit="D")
    window_end = origin + pd.to_timedelta(starts + config.e0_window_days, unit="D")
    findings = []
    for year in np.unique(index.year.to_numpy()).tolist():     # in order, as Python ints
        mine = np.asarray(centres.year == year)
        if not mine.any():
            mine = np.asarray((window_start < pd.Timestamp(year + 1, 1, 1))
                              & (window_end >= pd.Timestamp(year, 1, 1)))
        if good[mine].any():
            continue
        most = int(counts[mine].max()) if mine.any() else 0
        widest = float(spans[mine].max()) if mine.any() else 0.0
        fallback = config.e0_fallback is not None
        # since 0.19.0 a year without an E0 of its own takes the nearest year's where
        # another year of the record has one (nighttime.annual_e0, nearest_year)
        nearest = not fallback and bool(good[~mine].any())
        facts = (f"{year}: no {config.e0_window_days:g}-day window has {config.e0_min_points} "
                 f"measured night records spanning {config.e0_min_temperature_range:g} K (at "
                 f"most {most} records, widest temperature span {widest:.2f} K); ")
        joint = (None if fallback or nearest or config.e0_method != "joint"
                 else _joint_e0(index, usable, temperature, config, nee, year))
        if joint is not None and joint["accepted"]:
            findings.append(Finding("nighttime partitioning (E0)", facts + _joint_found(joint),
                                    False))
            continue
        findings.append(Finding("nighttime partitioning (E0)", (
            facts
            + (f"the fall-back e0_fallback = {config.e0_fallback:g} K would be used"
               if fallback else "the E0 of the nearest year with one would be used (set "
               "[processing] e0_fallback for a fixed E0 in K instead)" if nearest
               else "set [processing] e0_fallback (a fixed E0 in K) or supply a "
               "longer record with measured night NEE")
            + (_joint_first(config, fallback or nearest) if joint is None
               else f" (the year's joint fit, e0_method = \"joint\", finds none either: "
               f"{joint['reason'] or 'no window'}; with e0_fallback set, the fixed E0 is "
               "used)")), not (fallback or nearest)))
    return findings


def _joint_e0(index, usable, temperature, config, nee, year) -> dict:
    """The year's joint E0 fit on the counted night records, as the run fits it.

    The stopping rule of no window spanning ``e0_min_temperature_range`` guards the
    windows' E0 only: the joint fit (one E0, a free Rref per window) needs no such span.
    With ``respiration_driver = "auto"`` the run chose soil temperature on an invented
    fen (nights within 3.4 K a fortnight) and completed on the joint fit; the same
    driver set by hand was refused here before any fit (leftovers53). Fitting the joint
    E0 here stops a run only where the run would stop too. The records are those the
    preflight counts (before the u* filter where its threshold is not yet known), so the
    run, on fewer records, can still reject the fit and then says so itself.

    Returns
    -------
    dict
        ``e0``, ``e0_se`` [K], ``windows``, ``accepted`` and ``reason`` of the year's row
        of :func:`fluxpart.partition.nighttime.fit_e0_joint`.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315-323.

    Reichstein, M. et al. (2005). Global Change Biology 11:1424-1439 (the 15-day windows
    and the 5 K span of the windows' E0) (m).
    """
    mine = np.asarray(index.year == year)
    cut = event_breaks(index[mine], config.events)
    table = fit_e0_joint(index[mine], np.where(usable, nee, np.nan)[mine], temperature[mine],
                         usable[mine], e0_window_days=config.e0_window_days,
                         e0_min_points=config.e0_min_points, e0_bounds=config.e0_bounds,
                         e0_max_relative_error=config.e0_max_relative_error,
                         breaks=cut if len(cut) else None)
    return table.loc[year].to_dict() if year in table.index else {"accepted": False,
                                                                  "reason": "no window"}


def _joint_found(joint: dict) -> str:
    """The clause of a year whose joint E0 fit is accepted though no window spans.

    No value is named: the preflight's records are counted before the u* filter where
    its threshold is not yet known, so its E0 (310 ± 33 K on the invented fen) would
    stand beside the run's own (312 ± 20 K) as two answers.
    """
    return (f"the year's joint fit (e0_method = \"joint\": one E0 over the night records "
            f"of {int(joint['windows'])} consecutive windows, each with its own Rref) finds "
            "an E0 on these nights, which the run tries first and takes where it accepts it "
            "on the records left after the u* filter: an E0 found on so narrow a range is "
            "poorly determined (a warning of the run names the year and its value)")


def _joint_first(config, goes_on: bool) -> str:
    """The clause a year's E0 finding needs under ``e0_method = "joint"``.

    The joint fit (one E0 over all of a year's night records, a free Rref per window)
    needs no window spanning ``e0_min_temperature_range`` and is tried before any
    fall-back: on an invented fen whose soil nights spanned 2.7 K (3.4 K at most) the
    finding said "the fall-back e0_fallback = 200 K would be used" and the run took the
    joint fit's 267 ± 29 K instead (review63). Where the finding stops the run the
    joint fit is not reached; with ``e0_fallback`` set it is tried first.
    """
    if config.e0_method != "joint":
        return ""
    if goes_on:
        return (" where the year's joint fit (e0_method = \"joint\") finds no E0; it is "
                "tried first, and an E0 it finds on so narrow a range is poorly determined "
                "(a warning then names the year)")
    return (" (with e0_fallback set, the year's joint fit, e0_method = \"joint\", is tried "
            "first and the fixed E0 used only where it finds none)")


#: Stage of a fatal finding that stops one partitioning method only -> the method. Where
#: every fatal finding is of one of them, the run goes on with the other method
#: (:mod:`fluxpart.method_failure`). A nighttime E0 missing in every year is not among
#: them: the daytime method's E0 rests on the same night records (its fall-back is the
#: nighttime E0), so both stop.
_ONE_METHOD = {"nighttime partitioning (Rref)": "nighttime",
               "daytime partitioning (light response)": "daytime"}


def _one_method(findings: list) -> list:
    """The findings, a fatal one that stops one partitioning method alone made non-fatal."""
    fatal = {f.stage for f in findings if f.fatal}
    if len(fatal) != 1 or not fatal <= set(_ONE_METHOD):
        return findings
    method = _ONE_METHOD[next(iter(fatal))]
    other = {"nighttime": "daytime", "daytime": "nighttime"}[method]
    return [Finding(f.stage, f"{f.message}; the run goes on with the {other} method alone "
                    f"(gpp_{method} and reco_{method} NaN)", False) if f.fatal else f
            for f in findings]


def _rref(days, usable, config, without_ustar: int = 0) -> list:
    counts, _, _, _ = _window_counts(days, usable, config.rref_window_days,
                                     config.rref_window_days)
    if (counts >= config.rref_min_points).any():
        return []
    lost = (f", and {without_ustar} more without u*, which the u* filter rejects"
            if without_ustar else "")
    return [Finding("nighttime partitioning (Rref)", (
        f"no {config.rref_window_days:g}-day window has {config.rref_min_points} measured night "
        f"records ({int(usable.sum())} in all{lost}); supply measured night NEE"
        + (" and its u*" if without_ustar else "")), True)]


def _missing_ustar(index: pd.DatetimeIndex, night_measured: np.ndarray,
                   ustar: np.ndarray) -> list:
    """Night records with measured NEE but no u*: the u* filter rejects every one.

    Without u* a night's turbulence cannot be shown to be sufficient, so
    :func:`fluxpart.screening.ustar_filter` rejects the flux (common practice) and the
    night is gap-filled from other nights. A u* column missing for months thus removes
    those months' night data without any other note.
    """
    measured = int(night_measured.sum())
    without = night_measured & ~np.isfinite(ustar)
    if measured == 0 or without.sum() <= MISSING_USTAR_SHARE * measured:
        return []
    stamps = index[without]
    return [Finding("u* filter", (
        f"u* is missing at {int(without.sum())} of the {measured} night records with measured "
        f"NEE ({100 * (without.sum() / measured):.0f} %; {stamps[0]:%Y-%m-%d} .. "
        f"{stamps[-1]:%Y-%m-%d}): "
        "without u* a night's turbulence cannot be shown, so these nights are rejected and "
        "filled from other nights; check the u* column's mapping and missing codes"), False)]


def _daytime(days, usable_day, config) -> list:
    counts, _, _, _ = _window_counts(days, usable_day, config.daytime_window_days,
                                     config.daytime_window_step_days)
    if (counts >= config.daytime_min_points).any():
        return []
    return [Finding("daytime partitioning (light response)", (
        f"no {config.daytime_window_days:g}-day window has {config.daytime_min_points} measured "
        f"daytime NEE records with Rg above 0 ({int(usable_day.sum())} in the whole record): "
        "no daylight for the light response (Rg zero or missing, or NEE missing by day)"),
        True)]


def _ustar(index, usable_night, latitude, config) -> tuple:
    """Findings for years where u* detection cannot run, and those years."""
    if config.ustar_method == "fixed":
        return [], set()
    if config.ustar_method == "change_point":
        # each of the season's temperature strata needs its own bins (ustar.
        # change_point_threshold stratifies like the moving point test and does not merge
        # strata): 150 per season had been named, and the run then fell back silently
        needed = config.ustar_temperature_classes * _CHANGE_POINT_BINS * _PER_CLASS
    else:
        needed = config.ustar_temperature_classes * config.ustar_classes * _PER_CLASS
    seasons = assign_seasons(index, latitude)
    counts = pd.Series(usable_night, index=index).groupby(
        [seasons["year"].to_numpy(), seasons["season"].to_numpy()]).sum()
    findings, years = [], set()
    all_years = np.unique(index.year.to_numpy()).tolist()     # in order, as Python ints
    for year in all_years:
        mine = counts[counts.index.get_level_values(0) == year]
        if mine.empty or mine.max() < needed:
            years.add(int(year))
    # since 0.17.0 such a year takes the threshold detected in the nearest year with one
    # (ustar.nearest_detected_year), the fixed ustar_threshold only where no year has one;
    # since 0.20.0, where no season of any year can, each year's nights are first tested
    # pooled as one season (ustar._pooled_years), which this count cannot foretell
    fixed = f"the fixed ustar_threshold = {config.ustar_threshold:g} m s-1"
    fallback = ("each year's night records would be tested pooled as one season (the u* "
                "table's source pooled_year), a year that gives none so taking the nearest "
                f"year's threshold; where no year gives one, {fixed} would be used"
                if len(years) == len(all_years) else
                f"the threshold detected in the nearest year with one would be used ({fixed} "
                "if none has)")
    for year in sorted(years):
        mine = counts[counts.index.get_level_values(0) == year]
        best = (f"{int(mine.max())} in {mine.idxmax()[1]}" if not mine.empty else "none")
        findings.append(Finding("u* threshold", (
            f"{year}: no season has the {needed} night records with NEE, u* and Tair that "
            f"the {config.ustar_method} detector needs (most: {best}); {fallback}"), False))
    return findings, years


def _partial_budget_years(index, interval_minutes: float, year_start: str) -> list[str]:
    """One text per budget year the record holds only part of, for a record of a year or
    more.

    ``run`` warns of each partial budget year after its budget
    (:func:`fluxpart.budget_warnings.budget_year_warnings`), while ``check`` named only a
    record shorter than 365 days: a full year of records from April, or a calendar year
    under ``year_start = "07-01"``, is two partial budget years of about six months each
    (an invented southern site-year: 8688 of 17,520 and 8832 of 17,568 records), and
    ``check`` found "none". The count is the run's: records of the record (after
    :func:`fluxpart.budget_calendar.budget_year_edges`) against the budget year's length.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts of the record (local standard time).
    interval_minutes : float
        Record interval [min].
    year_start : str
        ``[processing] year_start``, ``"MM-DD"``.

    Returns
    -------
    list of str
        The texts, in the order of the years; empty where every budget year is whole.
    """
    table = budget_calendar.budget_years(index, year_start)
    years = table.groupby("year").agg(records=("year", "size"),
                                      start=("period_start", "first"),
                                      end=("period_end", "first"))
    expected = (years["end"] - years["start"]) / pd.Timedelta(minutes=interval_minutes)
    label = "{}" if year_start == "01-01" else "budget year {}"
    texts = []
    for year, row in years[years["records"] < expected].iterrows():
        last = row["end"] - pd.Timedelta(days=1)
        held = budget_warnings.held_span(row["records"], expected[year], interval_minutes)
        texts.append(f"{label.format(year)} ({row['start']:%Y-%m-%d} to {last:%Y-%m-%d}) holds "
                     f"{int(row['records'])} of {int(expected[year])} records "
                     f"({held}): its sums are partial and are not annual totals "
                     f"(year_start = \"{year_start}\"; run warns of it too)")
    return texts


def _days_text(span_days: float, interval_minutes: float) -> str:
    """``"200.5 days"``; near a whole year, the records short of it (365.0 would read whole)."""
    short = int(round((365.0 - span_days) * 1440.0 / interval_minutes))
    if span_days >= 364.95 and short > 0:
        return f"{span_days:.2f} days ({short} record(s) short of 365 days)"
    return f"{span_days:.1f} days"


#: Clock verdicts under which the site's solar noon is not the record's: the stamps are
#: shifted against the sun for the whole record or for its summer months.
_CLOCK_MOVES_NOON = ("shifted", "daylight_saving")
#: Findings that judge Rg against the sun's symmetry about the solar noon the site's
#: settings predict (:func:`fluxpart.column_faults.shaded_rg`).
_NOON_SYMMETRY_STAGES = ("input (rg shaded)",)
#: Clock verdicts under which the site's latitude is not the record's: the seasonal
#: cycle of Rg fits the other hemisphere or another latitude (:mod:`fluxpart.clock`).
_GEOMETRY_WRONG = ("hemisphere", "latitude")
#: Findings that judge Rg against the potential radiation of the site's latitude (how
#: high the sun stands in a record): a wrong latitude puts the sun high in the record's
#: winter and low in its summer, so these blamed the sensor for the latitude (review39).
_POTENTIAL_STAGES = ("input (rg zeros)", "input (rg dim)")


#: The findings that read Rg against the sun the settings predict: with the clock check
#: off nothing tells a clock or ``utc_offset`` off from what they name (round mistakes48:
#: ``utc_offset = 0`` at a UTC+1 site with the check off was named a shaded sensor, daytime
#: GPP moved by 2.6 sigma).
_SUN_TIMED_STAGES = ("input (rg shaded)", "screening (Rg above potential radiation)")


def _clock_off(finding: Finding) -> Finding:
    """`finding`, where it reads Rg against the sun, saying the clock was not checked."""
    if finding.stage not in _SUN_TIMED_STAGES:
        return finding
    message = finding.message.replace(" (see the clock check)", "")
    return Finding(finding.stage, message + (
        "; [processing] clock_check = \"off\": a clock or [site] utc_offset off by an hour "
        "looks alike, so set clock_check = \"warn\" to have it judged"), finding.fatal)


def defer_to_clock(findings: list, clock_status: str | None) -> list:
    """`findings` without those a clock shift explains, where the clock check found one.

    Parameters
    ----------
    findings : list of Finding
        The preflight's findings (:func:`preflight`).
    clock_status : str or None
        ``ClockVerdict.status`` of the clock check (:func:`fluxpart.clock.check_clock`);
        None where the check was off.

    Returns
    -------
    list of Finding
        `findings` in their order (with the check off, the findings that time Rg by the
        sun saying so), less the shaded-Rg finding where the clock check
        found the stamps shifted against the sun (``"shifted"``, ``"daylight_saving"``),
        the Rg-zeros finding then saying that the shift may explain it
        (:data:`CLOCK_SHIFT_CLAUSE`; since round leftovers58), and less the Rg-zeros and dim-Rg findings where it found the latitude wrong
        (``"hemisphere"``, ``"latitude"``: they judge Rg by the sun's height at the
        configured latitude; since review39).

    Notes
    -----
    The shading check compares Rg at equal times before and after solar noon, where the
    sun stands at the same height (Iqbal 1983 (m)). Stamps an hour off move the
    measured day against the noon the settings predict, so one half of it sees the sun
    higher than the other at the same distance from that noon, and the check read a
    clock an hour off as a sensor shaded for part of the day, telling the user to move
    the sensor beside the clock check's right fix (the example site at
    ``utc_offset = 2``: "the afternoon reaches a median 0.39 of the morning's
    clearness", review25). The clock check tells a shift from a shade by the rise and
    fall of Rg, which a shade hardly moves; once the clock is fixed the shading check
    judges the record again.

    References
    ----------
    Iqbal, M. (1983). An Introduction to Solar Radiation. Academic Press (m).
    """
    if clock_status is None:
        return [_clock_off(finding) for finding in findings]
    if clock_status in _GEOMETRY_WRONG:
        return [finding for finding in findings if finding.stage not in _POTENTIAL_STAGES]
    if clock_status not in _CLOCK_MOVES_NOON:
        return list(findings)
    return [_from_the_clock(finding) for finding in findings
            if finding.stage not in _NOON_SYMMETRY_STAGES]


#: What a Rg-zeros finding adds where the clock check found the stamps shifted against
#: the sun: the records it names as daylight may be the record's night.
CLOCK_SHIFT_CLAUSE = ("; the clock problem named above moves the sun these records are "
                      "judged against, so records it puts in daylight may be the record's "
                      "night: judge them again once the clock is fixed")


def _from_the_clock(finding: Finding) -> Finding:
    """`finding`, where it judges Rg of 0 by the sun's height, saying that the clock
    shift found may explain it (round leftovers58).

    A clock hours off puts the settings' daylight in the record's night, where a working
    pyranometer reads 0: on the grassland example (invented) at ``utc_offset = -3`` for
    +1, 865 records (14 % of those present) were named "lost values written as 0" beside
    the clock's refusal. It is kept, not dropped as under a wrong latitude: a shift of
    some months only (:func:`fluxpart.clock.check_clock`'s shifted period) leaves the
    zeros of the other months judged right.
    """
    if finding.stage != "input (rg zeros)":
        return finding
    return Finding(finding.stage, finding.message + CLOCK_SHIFT_CLAUSE, finding.fatal)


def shade_at_clock_shift(findings: list, verdict, rg, index, latitude: float,
                         longitude: float, utc_offset: float, interval_minutes: float,
                         columns=None) -> list:
    """`findings` without a shaded-Rg finding that a clock shift below the clock check's
    threshold explains.

    Parameters
    ----------
    findings : list of Finding
        The preflight's findings (after :func:`defer_to_clock`).
    verdict : fluxpart.clock.ClockVerdict or None
        The clock check's verdict; only ``"consistent"`` is judged here (a shift the
        check names is left to :func:`defer_to_clock`). Its ``shift_minutes`` (the
        median monthly shift of Rg's clear-sky peak against the sun the settings
        predict, positive when Rg comes later) and the used months'
        ``edge_shift_minutes`` (the shift of the midpoint of Rg's rise and fall) [min].
    rg : array_like
        The screened Rg the shading check read [W m-2].
    index : pandas.DatetimeIndex
        Interval starts, local standard time.
    latitude, longitude : float
        Site position [degrees north, degrees east].
    utc_offset : float
        Offset of the stamps' local standard time from UTC [hours].
    interval_minutes : float
        Record interval [min].
    columns : dict, optional
        Canonical name -> file column, as for :func:`preflight`.

    Returns
    -------
    list of Finding
        `findings` in their order, less the shaded-Rg finding where the peak and the
        rise and fall of Rg are shifted alike (a clock: at least
        :data:`_CLOCK_LIKE_MIN_SHIFT` minutes, the two within
        :data:`_CLOCK_LIKE_AGREEMENT` of the shift) and
        :func:`fluxpart.column_faults.shaded_rg` finds no shade against the sun moved by
        that shift (the potential radiation of the stamps less ``shift_minutes``).

    Notes
    -----
    The clock check calls a shift a clock problem only from two thirds of a record
    (20 min on half-hourly and 40 min on hourly records,
    :func:`fluxpart.clock.shift_threshold_minutes`), yet a
    shift of 15 to 30 min already breaks the symmetry about solar noon the shading check
    rests on (Iqbal 1983 (m)): at a low sun the potential radiation of a record
    changes by tens of percent within half an hour, so the clearness of the early half
    falls and that of the late half rises. Hourly invented records stamped 25 to 35 min
    late or early (a ``utc_offset`` of 9.5 for 10, a longitude 7.5° off) and half-hourly
    ones 15 to 19 min off at 5° N were named as a sensor shaded in the morning or
    afternoon, with the advice to move it, while the clock check said "consistent". A clock moves the peak and the rise and fall of Rg
    by the same minutes; a shade moves the edge on its side far more than the peak
    (the clock check's own test, :func:`fluxpart.clock.check_clock`). So the finding is
    judged again against the sun moved by the shift only where the two agree, and is
    kept where a shade remains.

    References
    ----------
    Iqbal, M. (1983). An Introduction to Solar Radiation. Academic Press (m).
    """
    findings = list(findings)
    if verdict is None or verdict.status != "consistent" \
            or not any(finding.stage in _NOON_SYMMETRY_STAGES for finding in findings):
        return findings
    shift = float(verdict.shift_minutes)
    months = verdict.months
    if not np.isfinite(shift) or abs(shift) < _CLOCK_LIKE_MIN_SHIFT \
            or not isinstance(months, pd.DataFrame) \
            or not {"used", "edge_shift_minutes"} <= set(months.columns):
        return findings
    edges = months.loc[months["used"].to_numpy(dtype=bool), "edge_shift_minutes"]
    edges = edges.to_numpy(dtype=float)
    edges = edges[np.isfinite(edges)]
    if not edges.size or abs(float(np.median(edges)) - shift) > \
            _CLOCK_LIKE_AGREEMENT * abs(shift):
        return findings
    index = pd.DatetimeIndex(index)
    moved = solar.potential_radiation(index - pd.Timedelta(minutes=shift), latitude,
                                      longitude, utc_offset, interval_minutes=interval_minutes)
    if shaded_rg(np.asarray(rg, dtype=float), np.asarray(moved, dtype=float), index,
                 columns) is not None:
        return findings
    return [finding for finding in findings if finding.stage not in _NOON_SYMMETRY_STAGES]


#: Smallest measured shift of Rg [min] that :func:`shade_at_clock_shift` takes for a
#: clock: the clock check's own tolerance (shifts within 10 min of each other agree).
_CLOCK_LIKE_MIN_SHIFT = 10.0
#: Largest difference between the peak's and the edges' shift, as a share of the
#: shift, that :func:`shade_at_clock_shift` takes for a clock [1]. Our choice: on
#: pvlib-built invented hourly and half-hourly records (5° to 65° N and 34.5° S) a
#: clock shift of 20 to 35 min gave at most 0.05, the direct beam blocked below 25°
#: of elevation on one side at least 0.45.
_CLOCK_LIKE_AGREEMENT = 0.25

#: Findings of NEE written in steps of two records (a coarser flux written twice): on the
#: day's ramps a step's first record departs from its neighbours with the ramp's sign at
#: whole hours, which the fixed-time check would call a calibration; the finding named
#: names the cause (round mistakes49). Records repeating others a day or more away (or
#: pasted over other records) are no steps: beside such a finding the check runs (it was
#: skipped there, round leftovers52), and a record equal to a neighbour is never judged
#: (:meth:`fluxpart.fixed_time_offsets._Setting.departures`).
_NEE_STEPS = ("input (nee twice)",)


def _fixed_time_offsets(frame: pd.DataFrame, is_night, interval_minutes: float,
                        sources=None) -> list:
    """NEE departing from its neighbours at fixed times of day (:mod:`.fixed_time_offsets`).

    Judged on NEE as read with the site flag applied, before the despiking: the spike
    test removes most records of a daily calibration but keeps those whose neighbours are
    missing, which then stand alone (round mistakes49).
    """
    if "nee" not in frame.columns:
        return []
    nee = frame["nee"].to_numpy(dtype=float)
    if "nee_flag" in frame.columns:
        nee = np.where(site_flag(frame["nee_flag"]), np.nan, nee)
    names = {"nee": "nee", **(sources or {})}
    text = fixed_time_offsets.nee_offset_at_fixed_time(nee, frame.index, int(interval_minutes),
                                                       is_night, names)
    return [Finding(fixed_time_offsets.STAGE, text, False)] if text else []


def preflight(frame: pd.DataFrame, screened: pd.DataFrame, is_night, potential, rg_high,
              latitude: float, config, interval_minutes: float, sources=None, *,
              sun_elevation=None, utc_offset: float = 0.0) -> list:
    """Find every condition that would make a stage fail or fall back.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical record (interval starts, local standard time).
    screened : pandas.DataFrame
        The same after screening (rejected values NaN), before the u* filter.
    is_night : array_like of bool
        Night mask of the records.
    potential : array_like
        Potential radiation of the records [W m-2].
    rg_high : array_like of bool
        Records whose Rg the screen rejected as above potential radiation.
    latitude : float
        Site latitude [degrees north] (selects the u* seasons).
    config : fluxpart.Config
        The settings (window lengths, minimum counts, fall-backs).
    interval_minutes : float
        Record interval [min].
    sources : dict, optional
        Canonical name -> file column it was read from (the reader's record), to name
        the column in a message.
    sun_elevation : array_like, optional
        Sun elevation at each record's middle [degrees]; where given, months whose dark
        records take up CO2 are named (:mod:`fluxpart.night_uptake`, not fatal).
    utc_offset : float, optional
        The site's offset of local standard time from UTC [h]: an empty leap day must
        start near midnight of local time or of UTC to be named (:mod:`fluxpart.leap_day`).

    Returns
    -------
    list of Finding
        Fatal findings first, each naming its stage.
    """
    index = pd.DatetimeIndex(frame.index)
    is_night = np.asarray(is_night, dtype=bool)
    # "auto" falls back to air temperature, the driver every record has
    temperature_name = ("tair" if config.respiration_driver == "auto"
                        else config.respiration_driver)
    findings = _constant(frame, temperature_name)
    if not findings:                     # a constant u* is named above
        findings += _wind_as_ustar(frame, interval_minutes, sources)
    if len(index) == 0:
        return [Finding("whole record", "no records", True)]
    if not findings:                     # a wholly constant column is named above
        flags = _flags_as_data(frame, sources)
        named = {finding.stage for finding in flags}
        findings += flags            # a flag's runs of one code are not a stuck sensor
        findings += [finding for finding in _stuck(frame, potential, interval_minutes)
                     if f"{finding.stage[:-1]} flag)" not in named]
        findings += _written_twice(frame, potential, interval_minutes, sources)
        repeated = _repeated_records(frame, interval_minutes)
        repeated = (repeated or _repeated_nee(frame, interval_minutes)
                    or _repeated_nee_any_lag(frame, interval_minutes))
        findings += repeated or _repeated_drivers(frame, interval_minutes, sources)
        findings += _column_faults(screened, potential, interval_minutes, sources,
                                   is_night, frame.attrs.get("nee_written_limit"))
        findings += _gapless(frame, interval_minutes, sources)
        # a leap day absent between complete days: stamps a year off (round mistakes53)
        text = leap_day.missing_leap_day(frame, interval_minutes, utc_offset=utc_offset)
        if text:
            findings.append(Finding(leap_day.STAGE, text, False))
        if not any(finding.stage in _NEE_STEPS for finding in findings):
            findings += _fixed_time_offsets(frame, is_night, interval_minutes, sources)
    if (temperature_name in frame.columns
            and not np.isfinite(frame[temperature_name].to_numpy(dtype=float)).any()):
        # a fixed driver without a value: both methods fail on it (process refuses it)
        findings.append(Finding(
            "respiration temperature",
            f"[processing] respiration_driver = {config.respiration_driver!r}, but column "
            f"{(sources or {}).get(temperature_name, temperature_name)!r} has no value: set "
            "respiration_driver = 'auto' or the other temperature", True))
    days = ((index - index[0].normalize()) / pd.Timedelta(days=1)).to_numpy()
    nee = screened["nee"].to_numpy(dtype=float)
    temperature = (screened[temperature_name].to_numpy(dtype=float)
                   if temperature_name in screened.columns else np.full(len(index), np.nan))
    usable_night = is_night & np.isfinite(nee) & np.isfinite(temperature)
    ustar = screened["ustar"].to_numpy(dtype=float) if "ustar" in screened.columns else nee * 0
    tair = screened["tair"].to_numpy(dtype=float) if "tair" in screened.columns else nee * 0
    # the detector classes nights by air temperature whatever drives respiration
    ustar_findings, fallback_years = _ustar(
        index, is_night & np.isfinite(nee) & np.isfinite(ustar) & np.isfinite(tair), latitude,
        config)
    # where the threshold is known before detection (method "fixed", or the fall-back of
    # years without enough night records), the u* filter's losses are counted too
    fixed_years = (set(np.unique(index.year.to_numpy()).tolist())
                   if config.ustar_method == "fixed"
                   else fallback_years)
    with np.errstate(invalid="ignore"):
        too_calm = np.isin(index.year, list(fixed_years)) & ~(ustar >= config.ustar_threshold)
    night_measured = usable_night
    # nights the u* filter rejects for want of u* (counted where the filter is known)
    without_ustar = int((night_measured & np.isin(index.year, list(fixed_years))
                         & ~np.isfinite(ustar)).sum())
    usable_night = usable_night & ~too_calm
    span_days = (index[-1] - index[0]) / pd.Timedelta(days=1) + interval_minutes / 1440.0
    if span_days < config.e0_window_days:
        fallback = config.e0_fallback is not None
        findings.append(Finding("nighttime partitioning (E0)", (
            f"the record covers {span_days:.1f} days, shorter than one E0 window "
            f"(e0_window_days = {config.e0_window_days:g}); "
            + (f"the fall-back e0_fallback = {config.e0_fallback:g} K would be used"
               if fallback else "supply a longer record or set [processing] e0_fallback")),
            not fallback))
    else:
        findings += _e0(days, index, usable_night, temperature, config, nee)
    findings += _rref(days, usable_night, config, without_ustar)
    if sun_elevation is not None:
        uptake = night_uptake.uptake_note(
            night_uptake.dark_uptake_months(index, nee, sun_elevation),
            (sources or {}).get("nee", "nee"))
        findings += [Finding(night_uptake.STAGE, uptake, False)] if uptake else []
    rg = frame["rg"].to_numpy(dtype=float) if "rg" in frame.columns else np.full(len(index),
                                                                                 np.nan)
    potential = np.asarray(potential, dtype=float)
    with np.errstate(invalid="ignore"):
        sunlit = rg > 0                   # measured sunlight (gaps in Rg count as none)
    findings += _daytime(days, np.isfinite(nee) & ~is_night & sunlit, config)
    long_gaps = _long_gaps(index, nee, interval_minutes)
    # a night stretch inside a gap of the whole record is named by that gap already
    findings += long_gaps or _long_night_gaps(index, nee, is_night)
    findings += _long_driver_gaps(index, frame, nee, interval_minutes, sources)
    missing_ustar = _missing_ustar(index, night_measured, ustar)
    findings += missing_ustar
    if not missing_ustar and "ustar" in frame.columns:
        # NEE where u* is missing: a u* of another record joined (round mistakes47)
        text = ustar_pairing.nee_without_ustar(frame["nee"].to_numpy(dtype=float),
                                               frame["ustar"].to_numpy(dtype=float), index,
                                               interval_minutes, sources, [
                                                   frame[name].to_numpy(dtype=float)
                                                   for name in ("rg", "tair")
                                                   if name in frame.columns])
        findings += [Finding(ustar_pairing.STAGE, text, False)] if text else []
    findings += ustar_findings
    if span_days < 365.0:
        findings.append(Finding("annual budget", (
            f"the record covers {_days_text(span_days, interval_minutes)}, less than a year: "
            "its sums are partial "
            "and are not annual totals"), False))
    else:
        # a year of records across a budget year's turn: two partial years (newuser55)
        findings += [Finding("annual budget", text, False) for text in
                     _partial_budget_years(index, interval_minutes, config.year_start)]
    rg_high = np.asarray(rg_high, dtype=bool)
    daylight = int((potential > 0).sum())
    if daylight and rg_high.sum() > RG_ABOVE_POTENTIAL_SHARE * daylight:
        hours = pd.Series(index[rg_high].hour).value_counts().sort_index()
        busiest = ", ".join(f"{h:02d}h" for h in hours.nlargest(3).index.sort_values())
        findings.append(Finding("screening (Rg above potential radiation)", (
            f"{int(rg_high.sum())} Rg records ({100 * (rg_high.sum() / daylight):.1f} % of the "
            f"sunlit ones) exceed the potential radiation, mostly at {busiest}: sunlight where the "
            "site's settings put none is clock or site-geometry evidence (see the clock "
            "check); these records are rejected and refilled"), False))
    dark = _dark_rg(frame, potential, config)
    if "rg" in frame.columns:
        findings += [Finding("night mask", text, False) for text in twilight_as_night(
            pd.to_numeric(frame["rg"], errors="coerce"), potential, config.night_rg_threshold)]
    if not dark and sun_elevation is not None and "rg" in frame.columns:
        findings += [Finding("night mask", text, False) for text in dark_as_day(
            pd.to_numeric(frame["rg"], errors="coerce"), sun_elevation,
            config.night_rg_threshold)]
    if dark and any(f.fatal and f.stage.startswith("nighttime") for f in findings):
        # the cause of the nighttime stages' failure: named first in run's error
        dark = [Finding(dark[0].stage, dark[0].message, True)]
    return sorted(_one_method(dark + findings), key=lambda f: not f.fatal)
