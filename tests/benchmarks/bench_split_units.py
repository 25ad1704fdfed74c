"""Benchmark: where and by how much a column's unit changed within the record (round splitfactor).

Each case writes one column of the invented Quillmoor grassland year
(``examples/quillmoor_grassland.csv``, fictional) in another unit from a planted date on (or
until it), reads it with ``read_config`` and prints whether it was read or refused, whether
the refusal names a unit changed within the record, the date and factor of the jump the
refusal states against those planted, and the unit it names. The planted factors are the
units' own (SI prefixes; 1 kPa = 10 hPa; mg CO2 m-2 s-1 = 1000 / 44.009 µmol m-2 s-1 and g C
m-2 per 30 min = 1e6 / 12.011 / 1800 µmol m-2 s-1: IUPAC standard atomic weights (m)).

    PYTHONPATH=$PWD python tests/benchmarks/bench_split_units.py [--only TEXT ...]
        [--seed N --variant c3|c4 --interval 30|60]

With ``--seed``, another invented Quillmoor year (``fluxpart.demo.write_example``: grassland
c3 or maize c4, 30- or 60-min records) stands in for the example.
"""

from __future__ import annotations

import argparse
import re
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart.errors import FluxpartError
from fluxpart.io import read_config

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "quillmoor_grassland.toml"
MISSING = -9999.0
CO2_MG = 44.009e-3                   # µmol m-2 s-1 -> mg CO2 m-2 s-1
C_PER_RECORD = 1800 * 12.011e-6      # µmol m-2 s-1 -> g C m-2 per 30-min record

#: (label, column, multiplier from the declared unit to the planted one, the unit's name,
#: decimals written, offset added after the multiplier)
UNITS = [
    ("NEE in mg CO2 m-2 s-1", "co2_exchange", CO2_MG, "mg CO2 m-2 s-1", 5, 0.0),
    ("NEE in g C m-2 per record", "co2_exchange", C_PER_RECORD, "g C m-2", 6, 0.0),
    ("VPD in hPa (declared kPa)", "vpd_kpa", 10.0, "hPa", 3, 0.0),
    ("VPD in Pa (declared kPa)", "vpd_kpa", 1000.0, "Pa", 1, 0.0),
    ("u* in cm s-1", "friction_velocity", 100.0, "cm s-1", 1, 0.0),
    ("u* in km h-1", "friction_velocity", 3.6, "km h-1", 3, 0.0),
    ("Rg in kW m-2", "solar_down", 1e-3, "kW m-2", 5, 0.0),
    ("Rg in MJ m-2 per record", "solar_down", 1800e-6, "MJ m-2", 6, 0.0),
    ("RH as a fraction", "rel_humidity", 0.01, "fraction", 4, 0.0),
    ("tair in °F", "air_temp_c", 1.8, "°F", 2, 32.0),
    ("tsoil in K", "soil_temp_5cm", 1.0, "K", 2, 273.15),
]
DATES = ["2021-03-17", "2021-05-12", "2021-07-09", "2021-09-20", "2021-11-05"]


def planted(frame: pd.DataFrame, column: str, factor: float, decimals: int, offset: float,
            date: str, later: bool) -> pd.DataFrame:
    """`frame` with `column` times `factor` plus `offset` from `date` on (`later`) or
    before it."""
    stamps = pd.to_datetime(frame["stamp_end"].astype(str), format="%Y%m%d%H%M")
    inside = (stamps > pd.Timestamp(date)).to_numpy()
    inside = (inside if later else ~inside) & (frame[column].to_numpy() != MISSING)
    values = frame[column].to_numpy(dtype=float)
    out = frame.copy()
    out[column] = np.where(inside, np.round(values * factor + offset, decimals), values)
    return out


def outcome(frame: pd.DataFrame, text: str, folder: Path) -> str:
    """The read's outcome: "read", or the refusal's first line."""
    frame.to_csv(folder / "quillmoor_grassland.csv", index=False)
    (folder / EXAMPLE.name).write_text(text)
    try:
        read_config(folder / EXAMPLE.name)
    except FluxpartError as error:
        return str(error).splitlines()[0]
    return "read"


def judged(message: str, date: str, factor: float, unit: str) -> str:
    """One line: the stated date's and factor's errors and the unit named."""
    if message == "read":
        return "read"
    split = "changed within the record" in message
    jump = re.search(r"jump by a factor ([0-9.e+-]+)\D*?(\d{4}-\d{2}-\d{2})", message)
    fits = re.search(r"which (fits [^)]*\)?)", message)
    change = re.search(r"values change from (\d{4}-\d{2}-\d{2}) on", message)
    if jump is None and change is not None:        # a unit with an offset: the day alone
        days = (pd.Timestamp(change.group(1)) - pd.Timestamp(date)).days
        return (f"refused, {'split named' if split else 'no split'}; date {change.group(1)} "
                f"({days:+d} d), no factor stated (a unit with an offset)")
    if jump is None:
        return f"refused, {'split named' if split else 'no split'}, no jump stated: {message[:90]}"
    found, at = float(jump.group(1)), pd.Timestamp(jump.group(2))
    days = (at - pd.Timestamp(date)).days
    ratio = found * factor           # the stated factor is declared over other: 1 / factor
    named = fits.group(1) if fits else "?"
    right = "RIGHT" if f"fits {unit!r}" in message else "wrong"
    return (f"refused, {'split named' if split else 'no split'}; date {at:%Y-%m-%d} "
            f"({days:+d} d), factor {found:.3g} (x{ratio:.2f} of planted); {named[:40]} {right}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--only", nargs="*", default=None)
    parser.add_argument("--seed", type=int, default=None)
    parser.add_argument("--variant", default="c3")
    parser.add_argument("--interval", type=int, default=30)
    args = parser.parse_args(argv)
    tally = {"cases": 0, "day": 0, "week": 0, "unit": 0, "read": 0}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        example = EXAMPLE
        if args.seed is not None:
            from fluxpart.demo import write_example
            example = write_example(folder / "demo", seed=args.seed, variant=args.variant,
                                    interval_minutes=args.interval)
        text = example.read_text().replace(f'path = "{example.stem}.csv"',
                                           f'path = "{EXAMPLE.stem}.csv"')
        clean = pd.read_csv(example.with_suffix(".csv"), dtype={"stamp_end": str})
        for label, column, factor, unit, decimals, offset in UNITS:
            for date in DATES:
                for later in (True, False):
                    name = f"{label} {'from' if later else 'until'} {date}"
                    if args.only and not any(o in name for o in args.only):
                        continue
                    line = judged(outcome(planted(clean, column, factor, decimals, offset, date, later),
                                          text, folder), date, factor, unit)
                    print(f"{name:48s} {line}", flush=True)
                    tally["cases"] += 1
                    days = re.search(r"\(([+-]\d+) d\)", line)
                    tally["day"] += bool(days and abs(int(days.group(1))) <= 1)
                    tally["week"] += bool(days and abs(int(days.group(1))) <= 7)
                    tally["unit"] += line.endswith("RIGHT")
                    tally["read"] += line == "read"
    print(f"{tally['cases']} cases: date within 1 day {tally['day']}, within 7 days "
          f"{tally['week']}, unit named right {tally['unit']}, read without refusal "
          f"{tally['read']}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
