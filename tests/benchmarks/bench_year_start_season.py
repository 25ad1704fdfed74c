"""A budget year opened inside the growing season: false alarms and power (round mistakes41).

:func:`fluxpart.year_start_season.split_growing_season` names a ``year_start`` where the
six months before it and the six from it each hold a quarter or more of the year's
monthly uptake. For each generated site-year (``fluxpart.scenarios.generate``,
``bench_generalisation.generate``, ``bench_other_physics.generate``) the script judges
the dormant-season start of its hemisphere (1 July south of the equator, else 1 October:
the default 1 January is never judged; it must not be named) and the other
hemisphere's (1 July north, 1 January given explicitly south; named where the season is
split). Not collected by pytest; prints figures and asserts nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_year_start_season.py --sites 70
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_storage_mapping import generated_years  # noqa: E402

from fluxpart.year_start_season import split_growing_season  # noqa: E402


def main(argv=None) -> int:
    years = generated_years(__doc__.splitlines()[0], argv, sites=70)
    own_named = other_named = 0
    for name, make in years:
        site_year = make()
        frame, latitude = site_year.frame, site_year.site.latitude
        own, other = ("07-01", "01-01") if latitude < 0 else ("10-01", "07-01")
        # "01-01" given explicitly: judged (default "" stands for none)
        hits = [split_growing_season(start, frame["nee"].to_numpy(dtype=float), frame.index,
                                     latitude, default="") is not None
                for start in (own, other)]
        own_named += hits[0]
        other_named += hits[1]
        print(f"{name:18s} {latitude:+7.2f}  own {own} {'named' if hits[0] else '-':5s}  "
              f"other {other} {'named' if hits[1] else '-'}", flush=True)
    print(f"\n{len(years)} site-years: own hemisphere's start named {own_named} (false "
          f"alarms), the other's named {other_named}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
