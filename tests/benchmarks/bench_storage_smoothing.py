"""A storage column that smooths NEE: false alarms and power (round mistakes41).

:func:`fluxpart.storage_size.storage_smooths_nee` names a storage column where NEE
(flux + storage) changes from one night record to the next as a running mean's while
the flux alone does not. Each generated site-year is given the invented vented store of
``bench_storage_mapping.store_columns`` (a store below the sensor that calm nights fill,
the storage term its change plus 0.3 µmol m-2 s-1 of a profile's noise), and the check
is run on the storage term as written (it must not be named) and multiplied by 3 and by
10 (a factor in a logger program; named where it outweighs the flux's random error).
Night: the sun below the horizon (:func:`fluxpart.solar.potential_radiation` of 0).
Not collected by pytest; prints figures and asserts nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_storage_smoothing.py --sites 20
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_storage_mapping import generated_years, store_columns  # noqa: E402

from fluxpart.solar import potential_radiation  # noqa: E402
from fluxpart.storage_size import storage_smooths_nee  # noqa: E402

FACTORS = (1.0, 3.0, 10.0)


def main(argv=None) -> int:
    years = generated_years(__doc__.splitlines()[0], argv, sites=20)
    named = {factor: 0 for factor in FACTORS}
    for name, make in years:
        site_year = make()
        turbulent, storage = store_columns(site_year)
        stamps = site_year.frame.index
        interval = int(round((stamps[1] - stamps[0]).total_seconds() / 60.0))
        site = site_year.site
        night = potential_radiation(stamps, site.latitude, site.longitude, site.utc_offset,
                                    interval_minutes=interval) <= 0.0
        found = [storage_smooths_nee(turbulent, factor * storage, night, stamps, interval)
                 is not None for factor in FACTORS]
        for factor, hit in zip(FACTORS, found, strict=True):
            named[factor] += hit
        print(f"{name:18s} " + "  ".join(f"x{factor:g} {'named' if hit else '-'}"
                                         for factor, hit in zip(FACTORS, found, strict=True)), flush=True)
    print(f"\n{len(years)} site-years: named " + ", ".join(
        f"x{factor:g} {named[factor]}" for factor in FACTORS) + " (x1: false alarms)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
