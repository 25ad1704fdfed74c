"""False alarms of the u* surface-layer check (round mistakes52).

``ustar_scale.ustar_beyond_surface_layer`` on every clean record at hand: the generated
site-years (``scenarios`` 0-39, ``bench_generalisation`` 0-13, ``bench_other_physics``
0-13, forests and woodlands as tall canopies, and every one also as a short canopy, the
stricter bounds: a forest judged so is a config mistake, not a false alarm), the demo's ten-year records, the
examples' and trial site files (``--trials DIR ...``, their own ``[site] canopy``, and as
short) and the clean-site probes' 78 site-years (``probe_clean_sites.py``,
``probe_clean_sites_weather.py``, seed 0). Night: Rg below 10 W m-2. A call is a false
alarm. Also the power: each record's u* times 3.6 (km h-1). About five minutes::

    .venv/bin/python tests/benchmarks/bench_ustar_scale.py --trials /tmp/fluxpart-trial27

``--step`` (round mistakes57) judges ``ustar_scale.ustar_step_up`` instead, once per record
(it knows no canopy): a call on a clean record is a false alarm; the power is each record's
u* times 3.6 from a day drawn (seeded by the record's place in the list) between its 60th
day and 60 days before its end, named where the day found lies within 3 days of it.
"""
from __future__ import annotations

import argparse
import sys
import tempfile
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import probe_clean_sites  # noqa: E402
import probe_clean_sites_weather  # noqa: E402
from bench_pairing_uptake import _trial_frames  # noqa: E402
from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import ustar_scale  # noqa: E402
from fluxpart.demo import site_year  # noqa: E402
from fluxpart.io import read_config  # noqa: E402

#: Words of the generated archetypes' names that say a forest or woodland (a tall canopy).
TALL_WORDS = ("forest", "deciduous", "needleleaf", "woodland", "evergreen", "mediterranean")
EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def _canopy(config: Path) -> str:
    return tomllib.loads(config.read_text()).get("site", {}).get("canopy", "tall")


def _records(trials):
    for name, site in site_years():
        archetype = site.scenario.archetype
        if any(word in archetype for word in TALL_WORDS):
            yield f"{name} {archetype}", site.frame, "tall"
        yield f"{name} {archetype} (as short)", site.frame, "short"
    for variant in ("c3", "c4"):
        for minutes in (30, 60):
            yield (f"demo {variant} {minutes}",
                   site_year(3, years=10, interval_minutes=minutes, variant=variant)[0],
                   "short")
    for name, frame in _trial_frames([EXAMPLES, *trials]):
        yield name, frame, _canopy(Path(name))
        yield name + " (as short)", frame, "short"
    with tempfile.TemporaryDirectory() as tmp:
        for probe in (probe_clean_sites, probe_clean_sites_weather):
            for spec in probe.SITES:
                config = probe.write_site(spec, 0, Path(tmp))
                frame, _ = read_config(config)
                yield f"clean {spec[0]} {spec[6]}", frame, _canopy(config)
                yield f"clean {spec[0]} {spec[6]} (as short)", frame, "short"


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    parser.add_argument("--step", action="store_true")
    args = parser.parse_args(argv)
    if args.step:
        return _step_main(args.trials)
    count, false_calls, hits, short_calls = 0, [], 0, []
    for name, frame, canopy in _records(args.trials):
        ustar = frame["ustar"].to_numpy(dtype=float)
        with np.errstate(invalid="ignore"):
            night = frame["rg"].to_numpy(dtype=float) < 10.0
        count += 1
        if ustar_scale.ustar_beyond_surface_layer(ustar, night, frame.index, canopy):
            tall_as_short = "(as short)" in name and any(w in name for w in TALL_WORDS)
            (short_calls if tall_as_short else false_calls).append(name)
        hits += ustar_scale.ustar_beyond_surface_layer(ustar * ustar_scale.KMH_FACTOR, night,
                                                       frame.index, canopy) is not None
    print(f"false alarms: {len(false_calls)} of {count} {false_calls or ''}")
    print(f"generated forests judged as short canopies named: {len(short_calls)} "
          f"{short_calls or ''}")
    print(f"u* x3.6 (km h-1) named: {hits} of {count}")
    return 0


def _step_main(trials) -> int:
    """False alarms and power of ``ustar_scale.ustar_step_up`` (``--step``)."""
    count, false_calls, hits, misses = 0, [], 0, []
    for name, frame, _ in _records(trials):
        if "(as short)" in name:
            continue
        ustar = frame["ustar"].to_numpy(dtype=float)
        with np.errstate(invalid="ignore"):
            night = frame["rg"].to_numpy(dtype=float) < 10.0
        index = frame.index
        if ustar_scale.ustar_step_up(ustar, night, index) is not None:
            false_calls.append(name)
        days = (index[-1] - index[0]).days
        rng = np.random.default_rng(count)
        at = (index[0].normalize()
              + pd.Timedelta(days=int(rng.integers(60, max(61, days - 60)))))
        step = ustar_scale.ustar_step_up(np.where(index >= at, ustar * ustar_scale.KMH_FACTOR,
                                                  ustar), night, index)
        found = step is not None and abs(step["at"] - at) <= pd.Timedelta(days=3)
        hits += found
        if not found:
            misses.append(f"{name} {at:%Y-%m-%d}")
        count += 1
    print(f"step false alarms: {len(false_calls)} of {count} {false_calls or ''}")
    print(f"u* x3.6 from a day named: {hits} of {count}; missed: {misses}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
