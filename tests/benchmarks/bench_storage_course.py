"""Night NEE following the storage column: false alarms and power (round mistakes55).

:func:`fluxpart.storage_course.night_nee_follows_storage` names a column mapped as the
turbulent flux that already holds the storage term. Each generated site-year gets the
vented store of ``bench_storage_mapping.store_columns`` (the turbulent flux and the
storage term under u*-dependent venting, NEE = flux + storage, Finnigan 2006); the
right mapping (flux, storage) must not be named, the flux delivered with its storage
added (flux + storage mapped as nee beside the storage column: counted twice) should
be. The maize example's files (turbulent flux and a store repeating one daily course)
are judged both ways too. Night: the potential radiation 0, as the reader's (the maize
example's civil stamps: PPFD below 10 µmol m-2 s-1). Prints figures, asserts nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_storage_course.py --sites 40
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_storage_mapping import generated_years, store_columns  # noqa: E402

from fluxpart.column_faults import storage_in_turbulent_flux  # noqa: E402
from fluxpart.solar import potential_radiation  # noqa: E402
from fluxpart.storage_course import night_nee_follows_storage, storage_slope  # noqa: E402

MAIZE = Path(__file__).resolve().parents[2] / "examples" / "quillmoor_maize_logger"


def judge(turbulent, storage, night, stamps, temperatures) -> dict:
    """Slope, standard error and both checks' verdicts of one mapping."""
    fitted = storage_slope(turbulent + storage, storage, night, stamps, temperatures)
    slope, error = fitted if fitted else (np.nan, np.nan)
    return {"slope": slope, "error": error,
            "named": night_nee_follows_storage(turbulent, storage, night, stamps,
                                               temperatures) is not None,
            "slope_check": storage_in_turbulent_flux(turbulent, storage, stamps) is not None}


def maize_columns():
    """The maize example's records (civil stamps, good enough for a night mask)."""
    frame = pd.concat([pd.read_csv(path, sep=";", decimal=",", skiprows=[0, 2],
                                   encoding="latin-1", na_values=[-9999])
                       for path in sorted(MAIZE.glob("maize_*.dat"))])
    stamps = pd.to_datetime(frame["Date"] + " " + frame["Time"].str.replace("24:00", "23:59"),
                            format="%d.%m.%Y %H:%M")
    frame = frame.assign(stamp=stamps).drop_duplicates("stamp").set_index("stamp")
    return (frame["co2_turb"].to_numpy(float), frame["co2_store"].to_numpy(float),
            frame["PAR_in"].to_numpy(float) < 10.0, frame.index,
            [frame["T_air"].to_numpy(float), frame["T_soil"].to_numpy(float)])


def line(name, right, twice) -> str:
    return (f"{name:18s} right: slope {right['slope']:+.2f} ± {right['error']:.2f} named "
            f"{right['named']!s:5s} (slope check {right['slope_check']!s:5s})  twice: slope "
            f"{twice['slope']:+.2f} ± {twice['error']:.2f} named {twice['named']!s:5s} "
            f"(slope check {twice['slope_check']})")


def main(argv=None) -> int:
    years = generated_years(__doc__.splitlines()[0], argv)
    rows = []
    turbulent, storage, night, stamps, temperatures = maize_columns()
    print(line("maize example", judge(turbulent, storage, night, stamps, temperatures),
               judge(turbulent + storage, storage, night, stamps, temperatures)),
          flush=True)
    for name, make in years:
        site_year = make()
        turbulent, storage = store_columns(site_year)
        frame = site_year.frame
        site = site_year.site
        night = potential_radiation(frame.index, site.latitude, site.longitude,
                                    site.utc_offset) <= 0.0
        temperatures = [frame[c].to_numpy(float) for c in ("tair", "tsoil") if c in frame]
        right = judge(turbulent, storage, night, frame.index, temperatures)
        twice = judge(turbulent + storage, storage, night, frame.index, temperatures)
        rows.append({"right": right["named"], "twice": twice["named"],
                     "right_old": right["slope_check"], "twice_old": twice["slope_check"]})
        print(line(name, right, twice), flush=True)
    table = pd.DataFrame(rows)
    print(f"\n{len(table)} site-years: right mapping named {int(table['right'].sum())} "
          f"(false alarms; the slope check {int(table['right_old'].sum())}), storage twice "
          f"named {int(table['twice'].sum())} (the slope check "
          f"{int(table['twice_old'].sum())}; either {int((table['twice'] | table['twice_old']).sum())})")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
