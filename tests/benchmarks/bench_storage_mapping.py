"""A flux mapped as the storage column: false alarms and power (round mistakes38).

:func:`fluxpart.column_faults.flux_as_storage` names a storage column whose absolute
correlation with the flux column exceeds 0.8. No generated site-year carries a storage
column, so this script gives each one an invented store below the sensor: the true NEE
of each record enters the store, and the turbulence carries a share of it up, 0.9 ×
min(u* / 0.3 m s-1, 1) per record (the vented store of the tests' helper
``stored_below_sensor``, with the record's measured u*); the turbulent flux is what is
carried up plus the record's measurement error, the storage term the change of the
store plus 0.3 µmol m-2 s-1 of noise (a profile's, our choice). NEE = turbulent flux +
storage term (Finnigan 2006, Agric. For. Meteorol. 136:108-113).

For each site-year (``fluxpart.scenarios.generate``, ``bench_generalisation.generate``,
``bench_other_physics.generate``) the script prints the correlation of the turbulent
flux with the storage term (the right mapping: it must not be named) and with NEE (NEE
mapped as storage: it must be), and whether the check names each. Not collected by
pytest; prints figures and asserts nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_storage_mapping.py --sites 40
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import bench_generalisation  # noqa: E402
import bench_other_physics  # noqa: E402

from fluxpart import scenarios  # noqa: E402
from fluxpart.column_faults import flux_as_storage  # noqa: E402

#: u* at which the store is vented fully [m s-1] (our choice, about a planted threshold).
VENTED_USTAR = 0.3
#: Share of the store carried up per record at full turbulence [1] (the tests' helper).
VENTED_SHARE = 0.9
#: Noise of the storage term [µmol m-2 s-1] (our choice: a profile system's).
STORAGE_NOISE = 0.3


def store_columns(site_year, seed: int = 0):
    """The turbulent flux and the storage term of `site_year` under the vented store."""
    true = site_year.truth["nee"].to_numpy(dtype=float)
    ustar = site_year.frame["ustar"].to_numpy(dtype=float)
    ustar = np.where(np.isfinite(ustar), ustar, np.nanmedian(ustar))
    vented = np.clip(ustar / VENTED_USTAR, 0.0, 1.0) * VENTED_SHARE
    store, carried = 0.0, np.empty(true.size)
    for i, exchange in enumerate(true):
        store += exchange
        carried[i] = vented[i] * store
        store -= carried[i]
    error = site_year.frame["nee"].to_numpy(dtype=float) - true
    storage = true - carried + np.random.default_rng(seed).normal(0.0, STORAGE_NOISE, true.size)
    return carried + error, storage


def _correlation(a, b) -> float:
    both = np.isfinite(a) & np.isfinite(b)
    return float(np.corrcoef(a[both], b[both])[0, 1])


def generated_years(description: str, argv=None, sites: int = 40) -> list:
    """(name, maker) of the generated site-years the options ``--sites`` and ``--others``
    choose: ``scenarios.generate`` seeds, then those of ``bench_generalisation`` and of
    ``bench_other_physics`` each (shared by the storage and year-start benchmarks)."""
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--sites", type=int, default=sites, help="scenarios.generate seeds")
    parser.add_argument("--others", type=int, default=14,
                        help="seeds of bench_generalisation and of bench_other_physics each")
    options = parser.parse_args(argv)
    warnings.simplefilter("ignore")
    years = [(f"scenarios {seed}", lambda s=seed: scenarios.generate(s))
             for seed in range(options.sites)]
    years += [(f"generalisation {seed}", lambda s=seed: bench_generalisation.generate(s)[1])
              for seed in range(options.others)]
    years += [(f"other physics {seed}", lambda s=seed: bench_other_physics.generate(s))
              for seed in range(options.others)]
    return years


def main(argv=None) -> int:
    years = generated_years(__doc__.splitlines()[0], argv)
    rows = []
    for name, make in years:
        site_year = make()
        turbulent, storage = store_columns(site_year)
        stamps = site_year.frame.index
        rows.append({"site_year": name, "latitude": site_year.site.latitude,
                     "r_storage": _correlation(turbulent, storage),
                     "r_nee": _correlation(turbulent, turbulent + storage),
                     "storage_named": flux_as_storage(turbulent, storage, stamps) is not None,
                     "nee_named": flux_as_storage(turbulent, turbulent + storage,
                                                  stamps) is not None})
        row = rows[-1]
        print(f"{name:18s} {row['latitude']:+7.2f}  r(flux, storage) {row['r_storage']:+.3f} "
              f"named {row['storage_named']!s:5s}  r(flux, NEE) {row['r_nee']:+.3f} "
              f"named {row['nee_named']}", flush=True)
    table = pd.DataFrame(rows)
    print(f"\n{len(table)} site-years: storage term named {int(table['storage_named'].sum())} "
          f"(false alarms; r {table['r_storage'].min():+.3f} to {table['r_storage'].max():+.3f}),"
          f" NEE as storage named {int(table['nee_named'].sum())} (r {table['r_nee'].min():+.3f}"
          f" to {table['r_nee'].max():+.3f})")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
