"""False alarms and power of ``damped_tair.damped_tair`` (round mistakes50).

The check names an air temperature whose daily course swings clearly less than the one
the VPD and RH columns imply (a sonic's temperature, a sensor in the canopy's shade, a
series averaged over hours). Run on each generated site-year as it is (a call is a false
alarm) and with its tair damped around each day's mean to ``--damping`` (2/3 and 0.8 by
default) plus 2 K, over the record or in June-August only (a call is a hit), and with a
second shielded thermometer's tair, and with a VPD of two hygrometers 3 % and 5 % apart or
taken over ice below freezing (review64; none of which should be named), on the invented demo's ten-year records (seed 3, c3
and c4, 30 and 60 min), the examples and trial site files (``--trials DIR ...``: folders
of a trial's ``--out``, every site TOML read as ``run`` reads it) as they are; the
smallest ratio seen (of the record or a month) is printed beside the counts.

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13. Usage (about a minute, plus the trials)::

    .venv/bin/python tests/benchmarks/bench_damped_tair.py [--trials DIR ...]
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_pairing_uptake import _trial_frames, ten_year_frames  # noqa: E402
from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import damped_tair  # noqa: E402
from fluxpart.variables import saturation_vapour_pressure  # noqa: E402

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def _minutes(frame) -> float:
    return (frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1)


def _ratio(frame, tair=None) -> float:
    """The smallest ratio of the record and its months (correlation 0.9 or more)."""
    if not {"tair", "rh", "vpd"} <= set(frame.columns):
        return np.nan
    tair = frame["tair"] if tair is None else tair
    args = (tair, frame["rh"], frame["vpd"])
    ratios = [damped_tair.damped_ratio(*args, _minutes(frame)),
              *damped_tair.damped_months(*args, frame.index, _minutes(frame)).values()]
    ratios = [r for r, c, _ in ratios if c >= damped_tair._MIN_CORRELATION]
    return min(ratios) if ratios else np.nan


def _called(frame, tair=None) -> bool:
    if not {"tair", "rh", "vpd"} <= set(frame.columns):
        return False
    return damped_tair.damped_tair(frame["tair"] if tair is None else tair, frame["rh"],
                                   frame["vpd"], _minutes(frame), None, frame.index) is not None


def _damped(frame, damping) -> np.ndarray:
    minutes = (frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1)
    tair = frame["tair"].astype(float)
    day = np.arange(len(frame)) // int(round(1440 / minutes))
    mean = tair.groupby(day).transform("mean")
    return (mean + (tair - mean) * damping + 2.0).to_numpy()


def _second_thermometer(frame, rng) -> np.ndarray:
    """A second shielded thermometer beside the humidity probe's: 0.3 K warmer, its own
    noise of 0.2 K and a daily course 0.93 times the probe's (another height; our
    choice of a sensor pair that should not be named)."""
    return _damped(frame, 0.93) - 1.7 + rng.normal(0, 0.2, len(frame))


def _two_hygrometers(frame, scale) -> np.ndarray:
    """VPD [as the frame's] from a gas analyser's water vapour `scale` times the humidity
    probe's and the air thermometer, beside the probe's RH (review64: a pair within a few
    percent RH of each other, which should not be named)."""
    tair, rh = frame["tair"].to_numpy(float), frame["rh"].to_numpy(float)
    saturation = saturation_vapour_pressure(tair)
    return (saturation - scale * rh / 100.0 * saturation) * _hpa_per_unit(frame)


def _over_ice(frame) -> np.ndarray:
    """VPD [as the frame's] a logger takes over ice below 0 degC (Alduchov & Eskridge 1996,
    eq. 23 (m)), RH over water; review64."""
    tair, rh = frame["tair"].to_numpy(float), frame["rh"].to_numpy(float)
    water = saturation_vapour_pressure(tair)
    ice = 6.1121 * np.exp(22.587 * tair / (tair + 273.86))
    return (np.where(tair < 0, ice, water) - rh / 100.0 * water) * _hpa_per_unit(frame)


def _hpa_per_unit(frame) -> float:
    """The frame's VPD unit against hPa (the generators write hPa; 1 where they agree)."""
    tair, rh = frame["tair"].to_numpy(float), frame["rh"].to_numpy(float)
    computed = saturation_vapour_pressure(tair) * (1 - rh / 100.0)
    vpd = frame["vpd"].to_numpy(float)
    both = np.isfinite(computed) & np.isfinite(vpd) & (computed > 1)
    return float(np.median(vpd[both] / computed[both])) if both.any() else 1.0


def main(argv=None):
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    parser.add_argument("--damping", nargs="*", type=float, default=[2 / 3, 0.8])
    args = parser.parse_args(argv)
    ratios, false_calls, hits = [], [], {d: 0 for d in args.damping}
    pair_calls, pair_ratios, summer_hits, rng = [], [], 0, np.random.default_rng(50)
    hygrometer_calls, ice_calls = {1.03: 0, 1.05: 0}, 0
    for name, site_year in site_years():
        frame = site_year.frame
        ratios.append(_ratio(frame))
        if _called(frame):
            false_calls.append(name)
        for damping in args.damping:
            hits[damping] += _called(frame, _damped(frame, damping))
        summer = np.isin(frame.index.month, [6, 7, 8])
        summer_hits += _called(frame, np.where(summer, _damped(frame, 2 / 3), frame["tair"]))
        pair = _second_thermometer(frame, rng)
        pair_ratios.append(_ratio(frame, pair))
        if _called(frame, pair):
            pair_calls.append(name)
        for scale in hygrometer_calls:
            hygrometer_calls[scale] += _called(frame.assign(vpd=_two_hygrometers(frame, scale)))
        ice_calls += _called(frame.assign(vpd=_over_ice(frame)))
    count = len(ratios)
    print(f"{count} generated site-years: false alarms {len(false_calls)} "
          f"{false_calls or ''}; smallest ratio {np.nanmin(ratios):.3f}, "
          f"judged {int(np.isfinite(ratios).sum())}; "
          + ", ".join(f"damped to {d:.2f} named {hits[d]} of {count}" for d in hits))
    print(f"damped to 2/3 in June-August only: named {summer_hits} of {count}")
    print(f"a second shielded thermometer as tair: named {len(pair_calls)} of {count} "
          f"{pair_calls or ''}; smallest ratio (record or month) {np.nanmin(pair_ratios):.3f}")
    print("VPD from an analyser's water vapour beside the probe's RH: "
          + ", ".join(f"{scale:.2f} times the probe's named {calls} of {count}"
                      for scale, calls in hygrometer_calls.items())
          + f"; VPD over ice below 0 degC named {ice_calls} of {count}")
    for variant, minutes, frame in ten_year_frames():
        print(f"demo ten years {variant} {minutes} min: ratio {_ratio(frame):.3f} "
              f"{'CALLED' if _called(frame) else 'quiet'}")
    files = [(name, _ratio(frame), _called(frame))
             for name, frame in _trial_frames([EXAMPLES, *args.trials])]
    called = [name for name, _, call in files if call]
    print("".join(f"  CALLED {name}\n" for name in called), end="")
    judged = [ratio for _, ratio, _ in files if np.isfinite(ratio)]
    print(f"examples and trial site files: false alarms {len(called)} of {len(files)} "
          f"({len(judged)} judged; smallest ratio "
          f"{min(judged) if judged else float('nan'):.3f})")
    for name, ratio, _ in sorted(files, key=lambda f: f[1] if np.isfinite(f[1]) else 9)[:5]:
        print(f"  lowest: {ratio:.3f} {name}")


if __name__ == "__main__":
    main()
