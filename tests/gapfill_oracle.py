"""Literal per-gap marginal distribution sampling: the test oracle of fluxpart.gapfill.

Written from the text of Reichstein et al. (2005), Global Change Biology 11:1424–1439,
appendix A, and the gap-filling flow chart of its first author (Reichstein, gap-filling
flow chart, workshop slides 2004), without reusing any code of :mod:`fluxpart.gapfill`:
for each gap, in time order, walk the steps in the flow chart's order and take the
first that finds at least ``min_donors`` measured records. The body works with NumPy
on that gap's window slice. It is slow on purpose (a Python loop over gaps) and
exists to check the vectorised module.

Conventions shared with the module (its docstring states them): windows in time
(±K days = ±K·records-per-day records), the diurnal course at d days ± 1 h
(records i + d·per_day + o, |d| <= K, |o| <= 1 h) on the same day and ±1 day, then
widening by 7 days per round up to ``max_window_days`` and no further than the
diurnal window covering the record, full window width reported (2K, or 2K + 1 for
the diurnal course), population standard deviation, quality A/B/C as in the flow
chart. With ``is_night`` given, a gap takes donors only from records of its own
class (night or day; Falge et al. 2001), except the diurnal course of a day gap, which
takes both; the diurnal course averages the means of its time-of-day offsets. Short
driver gaps (Tair, VPD, Tsoil) are interpolated linearly, gap by gap.
"""

import numpy as np
import pandas as pd

__all__ = ["oracle_fill", "oracle_fill_drivers", "oracle_fill_marginal", "oracle_local_linear"]


def _spacing_minutes(index):
    seconds = np.diff(index.to_numpy().astype("datetime64[s]")).astype(np.int64)
    return int(seconds[0]) // 60


def _steps_in_order(all_drivers, radiation, max_window_days, record_days):
    """The flow chart: 1 at 7, 14; 2 at 7; 3 at 0, 1; then +7 days per round."""
    sequence = []
    if all_drivers:
        sequence += [(1, 7), (1, 14)]
    if radiation:
        sequence += [(2, 7)]
    sequence += [(3, 0), (3, 1)]
    widening = 7
    while widening <= max_window_days:
        if all_drivers:
            sequence.append((1, 14 + widening))
        if radiation:
            sequence.append((2, 7 + widening))
        sequence.append((3, widening))
        if widening >= record_days:  # the diurnal window now covers the whole record
            break
        widening += 7
    return [(step, k) for step, k in sequence if k <= max_window_days]


def _quality(step, k):
    """Flow chart: all drivers <= ±14 d and diurnal same day A; Rg ±7 d and diurnal ±1 d B."""
    if step == 1:
        return 1 if k <= 14 else 3
    if step == 2:
        return 2 if k <= 7 else 3
    return 1 if k == 0 else 2 if k == 1 else 3


def oracle_local_linear(picked, donor_drivers, gap_drivers, tolerances, donor_means,
                        ridge=0.01):
    """One gap's local-linear correction of its donor mean, written out per gap.

    The slope records' values ``picked`` regressed on their drivers (each centred on
    the slope records' mean and divided by its tolerance) by least squares with ridge
    rows ``sqrt(ridge × records) × I`` appended (numpy.linalg.lstsq on the augmented
    system, the textbook form of ridge regression, Hoerl & Kennard 1970 (m)); the
    correction ``c = b · offset``, offset the gap's drivers minus the donors' means
    (``donor_means``), is kept by the share ``c² / (c² + v)``, v its variance from the
    slope records' scatter about their mean.
    """
    n, k = picked.size, len(donor_drivers)
    # a driver missing (NaN) at a record counts at its records' mean, at the gap (or at
    # every donor) as no offset
    centred = [np.where(np.isnan(x), 0.0, x - np.nanmean(x)) / tol if (~np.isnan(x)).any()
               else np.zeros(n) for x, tol in zip(donor_drivers, tolerances, strict=True)]
    offset = np.array([0.0 if np.isnan(g - m) else (g - m) / tol
                       for m, g, tol in zip(donor_means, gap_drivers, tolerances, strict=True)])
    design = np.vstack([np.column_stack(centred), np.sqrt(ridge * n) * np.eye(k)])
    response = np.concatenate([picked - picked.mean(), np.zeros(k)])
    slope = np.linalg.lstsq(design, response, rcond=None)[0]
    correction = float(slope @ offset)
    inverse = np.linalg.inv(design.T @ design)
    variance = float(np.mean((picked - picked.mean()) ** 2) * offset @ inverse @ offset)
    total = correction ** 2 + variance
    return correction * correction ** 2 / total if total > 0 else 0.0


def oracle_fill(values, per_day, hour_records, conditions, radiation_conditions,
                max_window_days=140.0, min_donors=3, is_night=None, fixed=None,
                local_linear=False, radiation_regressors=(), night_regressors=()):
    """Fill one series gap by gap; return value, method, window, count, std, quality arrays.

    ``conditions``: list of (driver array, tolerance) for step 1 or None;
    ``radiation_conditions``: list of (driver array, tolerance) for step 2 or None;
    ``is_night``: bool per record to fill night and day gaps from their own class;
    ``fixed``: bool per record of gaps already filled (interpolated) that stay as
    they are, method 4 and quality 4; ``local_linear``: steps 1 and 2 add
    :func:`oracle_local_linear` to the donors' mean, its slopes fitted on the records
    within 3 tolerances of the gap; step 2 also on ``radiation_regressors`` ((driver,
    tolerance) pairs that do not choose its donors); with ``is_night``, a night gap
    also on ``night_regressors`` (soil temperature) in step 1 and in step 2 within ±7
    days, after the others.
    """
    y = np.asarray(values, dtype=float)
    n = y.size
    measured = ~np.isnan(y)
    value = y.copy()
    method = np.where(measured, 0, -1).astype(np.int8)
    window = np.where(measured, 0.0, np.nan)
    count = np.zeros(n, dtype=np.int64)
    std = np.full(n, np.nan)
    quality = np.where(measured, 0, -1).astype(np.int8)
    sequence = _steps_in_order(conditions is not None, radiation_conditions is not None,
                               max_window_days, n / per_day)
    last_course = max([k for step, k in sequence if step == 3], default=0)
    for t in np.flatnonzero(~measured):
        if fixed is not None and fixed[t]:
            method[t], quality[t] = 4, 4
            continue
        donor = measured if is_night is None else measured & (is_night == is_night[t])
        # last resort (module notes, since 0.19.0): the diurnal course at doubled
        # windows until it covers the record, then, for a night gap, night records of
        # any hour within ±14, 28, 56, ... days (labelled step 2, quality C)
        widened, k = [], max(last_course, 7)
        while last_course < n / per_day and (not widened or widened[-1] < n / per_day):
            k = int(min(2 * k, np.ceil(n / per_day)))
            widened.append(k)
        nights, k = [], 14
        if is_night is not None and is_night[t]:
            while True:
                nights.append(k)
                if k * per_day >= n:
                    break
                k *= 2
        for step, k in sequence + [(3, k) for k in widened] + [(5, k) for k in nights]:
            if step == 5:
                lo, hi = max(0, t - k * per_day), min(n, t + k * per_day + 1)
                picked = y[lo:hi][donor[lo:hi]]
                if picked.size >= min_donors:
                    value[t], method[t], window[t] = picked.mean(), 2, 2.0 * k
                    count[t], std[t], quality[t] = picked.size, picked.std(), 3
                    break
                continue
            if step in (1, 2):
                pairs = conditions if step == 1 else radiation_conditions
                if any(np.isnan(driver[t]) for driver, _ in pairs):
                    continue  # this step needs every one of its drivers at t
                lo, hi = max(0, t - k * per_day), min(n, t + k * per_day + 1)
                ok = donor[lo:hi].copy()
                wide = donor[lo:hi].copy()       # the slope records: 3 tolerances
                at_gap = []
                for driver, tolerance in pairs:
                    if callable(tolerance):  # a tolerance that depends on the gap
                        tolerance = tolerance(t)
                    at_gap.append(tolerance)
                    # "within ±tolerance of the value at t", bounds in float64
                    ok &= driver[lo:hi] >= driver[t] - tolerance
                    ok &= driver[lo:hi] <= driver[t] + tolerance
                    wide &= driver[lo:hi] >= driver[t] - 3.0 * tolerance
                    wide &= driver[lo:hi] <= driver[t] + 3.0 * tolerance
                picked = y[lo:hi][ok]
                full_width = 2.0 * k
                shift = 0.0
                if local_linear and picked.size:
                    extra = list(radiation_regressors) if step == 2 and k <= 7 else []
                    if is_night is not None and is_night[t] and (step == 1 or k <= 7):
                        extra += list(night_regressors)
                    slope_drivers = [driver for driver, _ in pairs + extra]
                    means = [np.nanmean(d[lo:hi][ok]) if (~np.isnan(d[lo:hi][ok])).any()
                             else np.nan for d in slope_drivers]
                    shift = oracle_local_linear(
                        y[lo:hi][wide], [d[lo:hi][wide] for d in slope_drivers],
                        [d[t] for d in slope_drivers],
                        at_gap + [tolerance for _, tolerance in extra], means)
            else:
                candidates = (t + np.arange(-k, k + 1)[:, None] * per_day
                              + np.arange(-hour_records, hour_records + 1)[None, :]).ravel()
                inside = (candidates >= 0) & (candidates < n)
                offset = np.tile(np.arange(-hour_records, hour_records + 1), 2 * k + 1)[inside]
                candidates = candidates[inside]
                # a day gap's diurnal course takes night records too (symmetric window)
                course_donor = measured if is_night is None or not is_night[t] else donor
                used = course_donor[candidates]
                picked, offset = y[candidates][used], offset[used]
                full_width = 2.0 * k + 1.0
            if picked.size >= min_donors:
                value[t] = picked.mean() + shift if step in (1, 2) else np.mean(
                    [picked[offset == o].mean() for o in np.unique(offset)])  # offsets alike
                method[t] = step
                window[t] = full_width
                count[t] = picked.size
                std[t] = picked.std()
                quality[t] = _quality(step, k)
                break
    return value, method, window, count, std, quality


def oracle_fill_marginal(target, drivers, index, *, is_night=None, rg_tolerance=50.0,
                         tair_tolerance=2.5, vpd_tolerance=5.0, max_window_days=140.0,
                         min_donors=3, rg_window="centred", night_rg_threshold=10.0,
                         clearness=None, clearness_tolerance=0.15, estimate="local_linear"):
    """Oracle counterpart of :func:`fluxpart.gapfill.fill_marginal` (same columns).

    ``is_night`` None is the single rule (``donors="similar_conditions_only"``).
    With ``rg_window="centred"`` and separate classes, a day gap's radiation window
    reaches down to the night threshold and no further, so that it stays centred on
    the gap's own Rg, but it is never narrower than ±night_rg_threshold nor wider than
    ±rg_tolerance. With ``clearness`` (one value per record), steps 1 and 2 also require
    it within ±clearness_tolerance. With a ``tsoil`` column in ``drivers`` and separate
    classes, the night gaps' local-linear fills also regress on it (in units of
    ``tair_tolerance``).
    """
    minutes = _spacing_minutes(index)
    per_day, hour_records = 1440 // minutes, 60 // minutes
    rg, tair, vpd = (np.asarray(drivers[c], dtype=float) for c in ("rg", "tair", "vpd"))
    rg_tol = rg_tolerance
    if rg_window == "centred" and is_night is not None:
        night = np.asarray(is_night, dtype=bool)

        def rg_tol(t):
            if night[t]:
                return rg_tolerance
            reach_down = rg[t] - night_rg_threshold   # distance to the day class's floor
            return min(rg_tolerance, max(reach_down, night_rg_threshold))
    conditions = [(rg, rg_tol), (tair, tair_tolerance), (vpd, vpd_tolerance)]
    radiation = [(rg, rg_tol)]
    if clearness is not None:
        clear = (np.asarray(clearness, dtype=float), clearness_tolerance)
        conditions, radiation = conditions + [clear], radiation + [clear]
    soil = ([(np.asarray(drivers["tsoil"], dtype=float), tair_tolerance)]
            if "tsoil" in drivers.columns else [])
    out = oracle_fill(target, per_day, hour_records, conditions, radiation,
                      max_window_days, min_donors,
                      None if is_night is None else np.asarray(is_night, dtype=bool),
                      local_linear=estimate == "local_linear",
                      radiation_regressors=[(tair, tair_tolerance), (vpd, vpd_tolerance)],
                      night_regressors=soil)
    names = ("value", "method", "window_days", "count", "std", "quality")
    return pd.DataFrame(dict(zip(names, out, strict=True)), index=index)


def _interpolate_short_gaps(y, max_records):
    """Each run of NaN of at most max_records with values on both sides: a straight line."""
    y = y.copy()
    fixed = np.zeros(y.size, dtype=bool)
    t = 0
    while t < y.size:
        if not np.isnan(y[t]):
            t += 1
            continue
        end = t
        while end < y.size and np.isnan(y[end]):
            end += 1
        if t > 0 and end < y.size and end - t <= max_records:
            left, right = y[t - 1], y[end]
            for i in range(t, end):
                y[i] = left + (right - left) * (i - (t - 1)) / (end - (t - 1))
            fixed[t:end] = True
        t = end
    return y, fixed


def oracle_fill_drivers(frame, *, rg_tolerance=50.0, max_window_days=140.0,
                        interpolation_hours=3.0):
    """Oracle counterpart of :func:`fluxpart.gapfill.fill_drivers`."""
    minutes = _spacing_minutes(frame.index)
    per_day, hour_records = 1440 // minutes, 60 // minutes
    max_records = int(interpolation_hours * 60 // minutes)
    rg = frame["rg"].to_numpy(dtype=float)
    out = {}
    for name in [c for c in ("rg", "tair", "vpd", "tsoil") if c in frame.columns]:
        radiation = [(rg, rg_tolerance)] if name in ("tair", "vpd") else None
        y = frame[name].to_numpy(dtype=float)
        fixed = None
        if name != "rg":
            interpolated, fixed = _interpolate_short_gaps(y, max_records)
        value, _, _, _, _, quality = oracle_fill(y, per_day, hour_records, None, radiation,
                                                 max_window_days, 1, None, fixed)
        if fixed is not None:
            value[fixed] = interpolated[fixed]
        out[f"{name}_filled"] = value
        out[f"{name}_fill_quality"] = quality
    return pd.DataFrame(out, index=frame.index)
