"""False alarms and power of two checks of round mistakes47.

``ustar_pairing.nee_without_ustar`` names a u* column missing for days where the flux and
the weather are present (the flux and u* come from one sonic, so a tower's own u* is
missing where its NEE is); ``sunlit_uptake.no_sunlit_uptake`` names NEE that takes up no
CO2 in a year's warm, bright records (another gas's flux). Run on each generated
site-year as it is (a call is a false alarm) and with the mistake planted (a call is a
hit): the next site-year's u* of the same set joined by position, and an invented
methane flux in nmol m-2 s-1 (30 at a soil of 15 degC, a Q10 of 3, noise 3) in NEE's
place; the invented demo's ten-year records (seed 3, c3 and c4, 30 and 60 min) and trial
site files (``--trials DIR ...``: folders of a trial's ``--out``, every site TOML read as
``run`` reads it) as they are. Night for the uptake check: Rg below 10 W m-2 (the run's
default night threshold), in place of the potential radiation.

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13. Usage (about a minute, plus the trials)::

    .venv/bin/python tests/benchmarks/bench_pairing_uptake.py [--trials DIR ...]
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import sunlit_uptake, ustar_pairing  # noqa: E402


def _called(frame) -> bool:
    """The u* pairing check's call."""
    minutes = (frame.index[1] - frame.index[0]) / pd.Timedelta(minutes=1)
    return ustar_pairing.nee_without_ustar(frame["nee"].to_numpy(dtype=float),
                                           frame["ustar"].to_numpy(dtype=float), frame.index,
                                           minutes, drivers=[
                                               frame[name].to_numpy(dtype=float)
                                               for name in ("rg", "tair")
                                               if name in frame.columns]) is not None


def _no_uptake(frame) -> bool:
    """The sunlit uptake check's call (night: Rg below 10 W m-2)."""
    if not {"rg", "tair"} <= set(frame.columns):
        return False
    rg = frame["rg"].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        potential = np.where(rg < 10.0, 0.0, 1.0)
    return sunlit_uptake.no_sunlit_uptake(frame["nee"].to_numpy(dtype=float), rg,
                                          frame["tair"].to_numpy(dtype=float), potential,
                                          frame.index) is not None


def _methane(frame, rng):
    """An invented methane flux [nmol m-2 s-1] in NEE's place, with NEE's gaps."""
    soil = frame["tsoil"] if "tsoil" in frame.columns else frame["tair"]
    soil = soil.interpolate(limit_direction="both").to_numpy(dtype=float)
    flux = 30.0 * 3.0 ** ((soil - 15.0) / 10.0) + rng.normal(0.0, 3.0, len(soil))
    return np.where(np.isfinite(frame["nee"].to_numpy(dtype=float)), flux, np.nan)


def _share(frame) -> float:
    """Share of the records without u* that hold NEE."""
    lost = ~(frame["ustar"].to_numpy(dtype=float) > 0)
    return float(np.isfinite(frame["nee"].to_numpy(dtype=float))[lost].mean()) if lost.any() \
        else 0.0


def _trial_frames(folders):
    from fluxpart.io import read_config
    for folder in folders:
        for toml in sorted(Path(folder).rglob("*.toml")):
            try:
                frame, _ = read_config(toml)
            except Exception as error:            # a network file or a refused site
                print(f"  {toml}: not read ({str(error).splitlines()[0][:80]})")
                continue
            if {"nee", "ustar"} <= set(frame.columns):
                yield str(toml), frame


def ten_year_frames():
    """(variant, minutes, frame) of the invented demo's ten-year records (seed 3)."""
    from fluxpart.demo import site_year
    for variant in ("c3", "c4"):
        for minutes in (30, 60):
            yield variant, minutes, site_year(3, years=10, interval_minutes=minutes,
                                              variant=variant)[0]


def main(argv=None):
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    args = parser.parse_args(argv)
    sets = {}
    for name, site_year in site_years():
        sets.setdefault(name.split()[0], []).append((name, site_year.frame))
    count, false_calls, hits, shares = 0, [], 0, []
    uptake_false, uptake_hits, rng = [], 0, np.random.default_rng(47)
    for members in sets.values():
        for position, (name, frame) in enumerate(members):
            count += 1
            shares.append(_share(frame))
            if _called(frame):
                false_calls.append(name)
            if _no_uptake(frame):
                uptake_false.append(name)
            uptake_hits += _no_uptake(frame.assign(nee=_methane(frame, rng)))
            other = members[(position + 1) % len(members)][1]
            planted = frame.copy()
            planted["ustar"] = other["ustar"].to_numpy()[:len(frame)] if len(other) >= len(
                frame) else np.resize(other["ustar"].to_numpy(), len(frame))
            hits += _called(planted)
    print(f"{count} generated site-years: false alarms {len(false_calls)} {false_calls or ''}; "
          f"another site-year's u* named {hits} of {count}; share of records without u* "
          f"holding NEE {min(shares):.2f}-{max(shares):.2f}")
    print(f"no sunlit uptake: false alarms {len(uptake_false)} {uptake_false or ''}; "
          f"a methane flux named {uptake_hits} of {count}")
    for variant, minutes, frame in ten_year_frames():
        print(f"demo ten years {variant} {minutes} min: u* pairing "
              f"{'CALLED' if _called(frame) else 'quiet'}, no uptake "
              f"{'CALLED' if _no_uptake(frame) else 'quiet'}")
    if args.trials:
        called, judged = [], 0
        for name, frame in _trial_frames(args.trials):
            judged += 1
            for check, call in (("u* pairing", _called), ("no uptake", _no_uptake)):
                if call(frame):
                    called.append(name)
                    print(f"  CALLED ({check}) {name}")
        print(f"trial site files: false alarms {len(called)} of {judged}")


if __name__ == "__main__":
    main()
