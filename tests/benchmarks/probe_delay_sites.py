"""Which generated site-years can choose a delayed air temperature (round dampdelay).

``respiration_driver = "auto"`` tries air temperature delayed by
:data:`fluxpart.partition.temperature_choice.AIR_DELAYS_HOURS` only where the input has
no soil temperature: no ``tsoil`` column, or one without a single finite value
(:func:`fluxpart.partition.temperature_choice.choose_respiration_temperature`). Only such
site-years can change with a setting of the delayed temperature
(``air_delay_damping``); this prints, for each known-truth set, the seeds whose
generated record has no soil temperature, and the fewest finite soil values of the rest.
Generation only, no processing (a few seconds per set).

Usage: ``python tests/benchmarks/probe_delay_sites.py``
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

SETS = (("bench_calibration", 70), ("bench_generalisation", 56),
        ("bench_other_physics", 42))


def frame_of(module, seed):
    """The generated record of `seed` in the set of `module`."""
    if module.__name__ == "bench_calibration":
        from fluxpart import scenarios
        return scenarios.generate(seed).frame
    generated = module.generate(seed)
    return (generated[1] if isinstance(generated, tuple) else generated).frame


def main() -> int:
    import importlib

    for name, count in SETS:
        module = importlib.import_module(name)
        without, fewest = [], None
        for seed in range(count):
            frame = frame_of(module, seed)
            finite = (int(np.isfinite(frame["tsoil"].to_numpy(dtype=float)).sum())
                      if "tsoil" in frame.columns else 0)
            if finite == 0:
                without.append(seed)
            else:
                fewest = finite if fewest is None else min(fewest, finite)
        print(f"{name}: {count} site-years; without soil temperature (a delay tried): "
              f"{without or 'none'}; fewest finite tsoil values of the others: {fewest}",
              flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
