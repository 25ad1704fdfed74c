"""False alarms and power of the VPD-computed-with-the-soil-temperature check (polish48).

``vpd_soil.vpd_from_soil_temperature`` is run on each generated site-year as it is (a
call is a false alarm) and with the mistake planted (a call is a hit): the VPD column
replaced by e_s(tsoil) (1 - RH / 100), rounded to 0.1 hPa (a coarse logger column). For
each, ``column_faults.sun_heated_tair`` is run too, as the preflight runs it where the
soil check is quiet: on the planted sets it tells which sites the sun-heated message
(now naming both causes) would have been the only word.

Site-years: ``scenarios.generate`` seeds 0-39, ``bench_generalisation.generate`` 0-13,
``bench_other_physics.generate`` 0-13, and the two examples' files read as ``check``
reads them. Usage (about a minute)::

    .venv/bin/python tests/benchmarks/bench_vpd_soil.py
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from fluxpart import scenarios, vpd_soil  # noqa: E402
from fluxpart.column_faults import sun_heated_tair  # noqa: E402
from fluxpart.variables import vpd_from_rh  # noqa: E402

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def frames():
    """(name, frame) of the generated sets and the examples (canonical columns)."""
    import bench_generalisation
    import bench_other_physics

    from fluxpart.io import read_config
    for seed in range(40):
        yield f"scenarios {seed}", scenarios.generate(seed).frame
    for seed in range(14):
        yield f"generalisation {seed}", bench_generalisation.generate(seed)[1].frame
    for seed in range(14):
        yield f"other_physics {seed}", bench_other_physics.generate(seed).frame
    for name in ("quillmoor_grassland", "quillmoor_maize_logger"):
        yield name, read_config(EXAMPLES / f"{name}.toml")[0]


def calls(frame):
    """(soil check named, sun-heated check named) on one frame."""
    columns = {c: frame[c].to_numpy(dtype=float) for c in ("tair", "rh", "vpd", "tsoil", "rg")}
    soil = vpd_soil.vpd_from_soil_temperature(columns["tair"], columns["rh"], columns["vpd"],
                                              columns["tsoil"])
    sun = sun_heated_tair(columns["tair"], columns["rh"], columns["vpd"], columns["rg"],
                          None, frame.index)
    return soil is not None, sun is not None


def main():
    count = 0
    false_soil, false_sun, hits, sun_on_planted, skipped = [], [], 0, 0, []
    for name, frame in frames():
        if not {"tair", "rh", "vpd", "tsoil", "rg"} <= set(frame.columns):
            skipped.append(name)
            continue
        count += 1
        soil, sun = calls(frame)
        if soil:
            false_soil.append(name)
        if sun:
            false_sun.append(name)
        planted = frame.copy()
        vpd = np.round(vpd_from_rh(frame["rh"].to_numpy(float), frame["tsoil"].to_numpy(float)), 1)
        planted["vpd"] = np.where(np.isfinite(frame["vpd"].to_numpy(float)), vpd, np.nan)
        soil, sun = calls(planted)
        hits += soil
        sun_on_planted += sun
    print(f"{count} site-years judged; skipped (no tair, rh, vpd, tsoil or rg): {skipped or 0}")
    print(f"vpd from tsoil: false alarms {len(false_soil)} {false_soil or ''}; "
          f"planted named {hits} of {count}")
    print(f"sun-heated tair on the honest sets: {len(false_sun)} {false_sun or ''}; on the "
          f"planted sets {sun_on_planted} of {count} (where the soil check is quiet it names both)")


if __name__ == "__main__":
    main()
