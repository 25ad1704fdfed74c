"""A fixed u* threshold far above the detected one: false alarms (round mistakes41).

:func:`fluxpart.ustar_fixed.fixed_threshold_note` names a fixed threshold above the
detected 95th percentile (times 1.2) that keeps fewer than a tenth of the measured night
records the detected threshold keeps. Each generated site-year
(``fluxpart.scenarios.generate``) is checked with the fixed threshold set to its planted
one (the site's own, known truth: it must not be named at all), to 0.4 times it (named as
too low: round leftovers49 measures that the night-deficit rule keeps these) and to 2.5
times it (a threshold of another site or a slip). Night: the sun below the horizon. Round
mistakes43 adds the floor (``floor_far_above_note``): ``ustar_min_threshold`` at the
planted threshold, at 0.1 m s-1 (the tall canopy's floor, a value in use) and at 2.5
times the planted one. Not collected by pytest; prints figures and asserts nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_ustar_fixed_high.py --sites 20
"""

from __future__ import annotations

import argparse
import warnings

from fluxpart import Config, scenarios
from fluxpart.solar import potential_radiation
from fluxpart.ustar import CANOPY_FLOORS
from fluxpart.ustar_fixed import fixed_threshold_note, floor_far_above_note

FACTORS = (0.4, 1.0, 2.5)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=20, help="scenarios.generate seeds")
    options = parser.parse_args(argv)
    warnings.simplefilter("ignore")
    named = {factor: 0 for factor in FACTORS}
    floors_named = {"planted": 0, "0.1": 0, "x2.5": 0}
    for seed in range(options.sites):
        site_year = scenarios.generate(seed)
        frame, site = site_year.frame, site_year.site
        planted = float(site_year.scenario.parameters["ustar_threshold"])
        interval = int(round((frame.index[1] - frame.index[0]).total_seconds() / 60.0))
        night = potential_radiation(frame.index, site.latitude, site.longitude,
                                    site.utc_offset, interval_minutes=interval) <= 0.0
        found = []
        for factor in FACTORS:
            note = fixed_threshold_note(
                frame.index, frame["nee"].to_numpy(), frame["ustar"].to_numpy(),
                frame["tair"].to_numpy(), night, site.latitude, factor * planted, Config(),
                CANOPY_FLOORS[site.canopy])
            high = note is not None and "far above" in note
            low = note is not None and not high
            hit = high if factor > 1 else low if factor < 1 else note is not None
            named[factor] += hit
            found.append(hit)
        floors = {"planted": planted, "0.1": 0.1, "x2.5": 2.5 * planted}
        floor_hits = {}
        for name, value in floors.items():
            note = floor_far_above_note(
                frame.index, frame["nee"].to_numpy(), frame["ustar"].to_numpy(),
                frame["tair"].to_numpy(), night, site.latitude,
                Config(ustar_min_threshold=value), CANOPY_FLOORS[site.canopy])
            floor_hits[name] = note is not None
            floors_named[name] += note is not None
        print(f"scenarios {seed:3d} planted {planted:.3f} " + "  ".join(
            f"x{factor:g} {'named' if hit else '-'}" for factor, hit in zip(FACTORS, found, strict=True))
            + "  floor " + " ".join(f"{k} {'named' if v else '-'}" for k, v in floor_hits.items()),
            flush=True)
    print(f"\n{options.sites} site-years named: " + ", ".join(
        f"x{factor:g} {named[factor]}" for factor in FACTORS)
          + " (x0.4 as too low, x2.5 as too high; x1 by either: false alarms)")
    print("floors named: " + ", ".join(f"{k} {v}" for k, v in floors_named.items())
          + " (planted: false alarms)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
