"""Benchmark: false alarms and catches of the clock and geometry check (issue 12).

Run ``python tests/benchmarks/bench_clock.py`` from the repository root (pvlib needed).
Invented Rg records from ``tests/clock_sites.py`` (sun and clear sky from pvlib, clouds
invented) at latitudes from 78° S to 78° N, 30- and 60-minute records:

- correct sites, plain, with a sensor tilted 3° east, with the western low sun shaded, with
  convective afternoons on 40 % of days, and with a monsoon (clear-day Rg 50 % lower in
  summer): any problem is a false alarm;
- clocks one record early and late: a miss where the status is not ``shifted``;
- the latitude's sign flipped: a miss where the hemisphere is not ``mismatch``;
- daylight-saving stamps (northern April–October, southern October–March).

Prints the counts, the worst estimate error on shifted clocks and the time per site-year.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

_ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(_ROOT), str(_ROOT / "tests")]

from clock_sites import synthetic_rg  # noqa: E402

from fluxpart.clock import check_clock  # noqa: E402

LATITUDES = (-78.0, -60.0, -35.0, -12.0, 5.0, 20.0, 45.0, 60.0, 70.0, 78.0)
CORRECT = {
    "plain": {"cloudiness": "cloudy"},
    "tilted 3° east": {"tilt_degrees": 3.0, "tilt_azimuth": 90.0},
    "shaded west": {"shade_azimuths": (240.0, 300.0)},
    "afternoon showers": {"afternoon_showers": 0.4, "cloudiness": "cloudy"},
    "monsoon": {"wet_summer": 0.5},
}


def _site(latitude):
    longitude = 30.0 if latitude >= 0 else 150.0
    return longitude, round(longitude / 15.0)


def main() -> None:
    seconds = []
    false_alarms, cases = [], 0
    for name, extra in CORRECT.items():
        for latitude in LATITUDES:
            for interval in (30, 60):
                longitude, offset = _site(latitude)
                rg = synthetic_rg(latitude, longitude, offset, interval_minutes=interval,
                                  seed=int(abs(latitude)) + interval, **extra)
                start = time.perf_counter()
                verdict = check_clock(rg.index, rg.to_numpy(), latitude, longitude, offset,
                                      interval)
                seconds.append(time.perf_counter() - start)
                cases += 1
                if verdict.problems:
                    false_alarms.append((name, latitude, interval, verdict.problems[0][:90]))
    print(f"correct sites: {len(false_alarms)} false alarm(s) of {cases}")
    for alarm in false_alarms:
        print("  ", *alarm)

    misses, errors, cases = [], [], 0
    for latitude in LATITUDES:
        for interval in (30, 60):
            for sign in (-1, 1):
                longitude, offset = _site(latitude)
                shift = sign * interval
                rg = synthetic_rg(latitude, longitude, offset, interval_minutes=interval,
                                  clock_shift_minutes=shift, cloudiness="cloudy", seed=3)
                verdict = check_clock(rg.index, rg.to_numpy(), latitude, longitude, offset,
                                      interval)
                cases += 1
                if verdict.status != "shifted":
                    misses.append((latitude, interval, shift, verdict.status,
                                   round(float(verdict.shift_minutes), 1)))
                else:
                    errors.append(abs(verdict.shift_minutes - shift))
    print(f"clock one record off: {len(misses)} miss(es) of {cases}; estimate error median "
          f"{np.median(errors):.1f} min, worst {np.max(errors):.1f} min")
    for miss in misses:
        print("  ", *miss)

    misses, cases = [], 0
    for latitude in LATITUDES:
        longitude, offset = _site(latitude)
        rg = synthetic_rg(latitude, longitude, offset, interval_minutes=30, seed=5)
        verdict = check_clock(rg.index, rg.to_numpy(), -latitude, longitude, offset, 30)
        cases += 1
        if verdict.hemisphere != "mismatch":
            misses.append((latitude, verdict.hemisphere))
    print(f"latitude sign flipped: {len(misses)} not caught of {cases} "
          "(near the equator the check says it cannot judge)")
    for miss in misses:
        print("  ", *miss)

    caught = 0
    for latitude, months in ((50.0, (4, 11)), (-35.0, (10, 4)), (60.0, (4, 11))):
        for interval in (30, 60):
            longitude, offset = _site(latitude)
            rg = synthetic_rg(latitude, longitude, offset, interval_minutes=interval,
                              daylight_saving=months, seed=6)
            verdict = check_clock(rg.index, rg.to_numpy(), latitude, longitude, offset,
                                  interval)
            caught += verdict.status == "daylight_saving"
    print(f"daylight-saving stamps named: {caught} of 6")
    print(f"check_clock per site-year: median {np.median(seconds):.2f} s, "
          f"max {np.max(seconds):.2f} s")


if __name__ == "__main__":
    main()
