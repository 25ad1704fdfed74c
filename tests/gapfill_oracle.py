"""Literal per-gap marginal distribution sampling: the test oracle of fluxpart.gapfill.

Written from the text of Reichstein et al. (2005), Global Change Biology 11:1424–1439,
appendix A, without reusing any code of :mod:`fluxpart.gapfill`: for each gap, in
time order, walk the steps in the paper's order and take the first that finds
measured records. The body works with NumPy on that gap's window slice. It is slow
on purpose (a Python loop over gaps) and exists to check the vectorised module.

Conventions shared with the module (its docstring states them): windows in time
(±K days = ±K·records-per-day records), the diurnal course at d days ± 1 h
(records i + d·per_day + o, |d| <= K, |o| <= 1 h), widening by 7 days per round
up to ``max_window_days`` and no further than the diurnal window covering the
record, full window width reported (2K, or 2K + 1 for the diurnal course),
population standard deviation, quality A/B/C (m).
"""

import numpy as np
import pandas as pd

__all__ = ["oracle_fill", "oracle_fill_drivers", "oracle_fill_marginal"]


def _spacing_minutes(index):
    seconds = np.diff(index.to_numpy().astype("datetime64[s]")).astype(np.int64)
    return int(seconds[0]) // 60


def _steps_in_order(all_drivers, radiation, max_window_days, record_days):
    """The paper's flow: 1 at 7, 14; 2 at 7; 3 at 0, 1, 2; then +7 days per round."""
    sequence = []
    if all_drivers:
        sequence += [(1, 7), (1, 14)]
    if radiation:
        sequence += [(2, 7)]
    sequence += [(3, 0), (3, 1), (3, 2)]
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


def _quality(step, full_width):
    if step in (1, 2):
        return 1 if full_width <= 14 else 2 if full_width <= 28 else 3
    return 1 if full_width <= 1 else 2 if full_width <= 5 else 3


def oracle_fill(values, per_day, hour_records, conditions, radiation_condition,
                max_window_days=70.0):
    """Fill one series gap by gap; return value, method, window, count, std, quality arrays.

    ``conditions``: list of (driver array, tolerance) for step 1 or None;
    ``radiation_condition``: (driver array, tolerance) for step 2 or None.
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
    sequence = _steps_in_order(conditions is not None, radiation_condition is not None,
                               max_window_days, n / per_day)
    for t in np.flatnonzero(~measured):
        for step, k in sequence:
            if step in (1, 2):
                pairs = conditions if step == 1 else [radiation_condition]
                if any(np.isnan(driver[t]) for driver, _ in pairs):
                    continue  # this step needs every one of its drivers at t
                lo, hi = max(0, t - k * per_day), min(n, t + k * per_day + 1)
                ok = measured[lo:hi].copy()
                for driver, tolerance in pairs:
                    # "within ±tolerance of the value at t", bounds in float64
                    ok &= driver[lo:hi] >= driver[t] - tolerance
                    ok &= driver[lo:hi] <= driver[t] + tolerance
                picked = y[lo:hi][ok]
                full_width = 2.0 * k
            else:
                candidates = (t + np.arange(-k, k + 1)[:, None] * per_day
                              + np.arange(-hour_records, hour_records + 1)[None, :]).ravel()
                candidates = candidates[(candidates >= 0) & (candidates < n)]
                picked = y[candidates][measured[candidates]]
                full_width = 2.0 * k + 1.0
            if picked.size:
                value[t] = picked.mean()
                method[t] = step
                window[t] = full_width
                count[t] = picked.size
                std[t] = picked.std()
                quality[t] = _quality(step, full_width)
                break
    return value, method, window, count, std, quality


def oracle_fill_marginal(target, drivers, index, *, rg_tolerance=50.0, tair_tolerance=2.5,
                         vpd_tolerance=5.0, max_window_days=70.0):
    """Oracle counterpart of :func:`fluxpart.gapfill.fill_marginal` (same columns)."""
    minutes = _spacing_minutes(index)
    per_day, hour_records = 1440 // minutes, 60 // minutes
    rg, tair, vpd = (np.asarray(drivers[c], dtype=float) for c in ("rg", "tair", "vpd"))
    out = oracle_fill(target, per_day, hour_records,
                      [(rg, rg_tolerance), (tair, tair_tolerance), (vpd, vpd_tolerance)],
                      (rg, rg_tolerance), max_window_days)
    names = ("value", "method", "window_days", "count", "std", "quality")
    return pd.DataFrame(dict(zip(names, out, strict=True)), index=index)


def oracle_fill_drivers(frame, *, rg_tolerance=50.0, max_window_days=70.0):
    """Oracle counterpart of :func:`fluxpart.gapfill.fill_drivers`."""
    minutes = _spacing_minutes(frame.index)
    per_day, hour_records = 1440 // minutes, 60 // minutes
    rg = frame["rg"].to_numpy(dtype=float)
    out = {}
    for name in [c for c in ("rg", "tair", "vpd", "tsoil") if c in frame.columns]:
        radiation = (rg, rg_tolerance) if name in ("tair", "vpd") else None
        value, _, _, _, _, quality = oracle_fill(frame[name].to_numpy(dtype=float), per_day,
                                                 hour_records, None, radiation, max_window_days)
        out[f"{name}_filled"] = value
        out[f"{name}_fill_quality"] = quality
    return pd.DataFrame(out, index=frame.index)
