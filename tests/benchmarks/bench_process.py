"""Benchmark: the whole `fluxpart.process` of demo site-years (run by hand, not by pytest).

Prints the median wall and CPU time of one site-year (30 min and 60 min), the peak memory
of one site-year and of ten years in one call (tracemalloc, Python-level allocations
including NumPy buffers), and the memory ratio of ten years to one. CPU time (of this
process) is the steadier figure on a shared machine; wall time includes waiting for a core.

``--stages`` instead prints where the CPU time of one site-year goes: each stage function
of the pipeline is wrapped and timed (``time.process_time``; a stage called inside another
counts in both), best of three runs.

    python tests/benchmarks/bench_process.py [--stages]
"""

import argparse
import collections
import functools
import importlib
import statistics
import time
import tracemalloc

from fluxpart import Config, demo, process

# (module, function) pairs timed by --stages; the stage modules call each through its module
# or as a global of its own module (``daytime.partition_daytime``,
# ``fill_and_partition``), so replacing the module attribute is enough
_STAGES = [
    ("fluxpart.screening_stage", "clock_and_preflight"),
    ("fluxpart.respiration_driver", "chosen_temperature"),
    ("fluxpart.ustar_stage", "ustar_thresholds"),
    ("fluxpart.ustar_runs", "fill_and_partition"),
    ("fluxpart.uncertainty_assembly", "budget_uncertainty"),
    ("fluxpart.gapfill", "fill_marginal"),
    ("fluxpart.partition.nighttime", "partition_nighttime"),
    ("fluxpart.partition.daytime", "partition_daytime"),
    ("fluxpart.uncertainty", "monte_carlo_sums"),
    ("fluxpart.uncertainty", "period_uncertainty"),
    ("fluxpart.uncertainty", "artificial_gap_errors"),
    ("fluxpart.budget", "aggregate"),
]


def _median_seconds(frame, site, config, repeats=3):
    walls, cpus = [], []
    for _ in range(repeats):
        wall, cpu = time.perf_counter(), time.process_time()
        process(frame, site, config)
        walls.append(time.perf_counter() - wall)
        cpus.append(time.process_time() - cpu)
    return statistics.median(walls), statistics.median(cpus)


def _peak_megabytes(frame, site, config):
    tracemalloc.start()
    process(frame, site, config)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def _stages(frame, site, config, repeats=3):
    """CPU seconds per stage function (best of `repeats` runs) and the calls per run."""
    spent = collections.defaultdict(list)
    calls = collections.Counter()

    def timed(label, function):
        @functools.wraps(function)
        def wrapper(*args, **kwargs):
            start = time.process_time()
            try:
                return function(*args, **kwargs)
            finally:
                spent[label][-1] += time.process_time() - start
                calls[label] += 1
        return wrapper

    for module_name, name in _STAGES:
        module = importlib.import_module(module_name)
        label = f"{module_name.removeprefix('fluxpart.')}.{name}"
        setattr(module, name, timed(label, getattr(module, name)))
    totals = []
    for _ in range(repeats):
        for label in [f"{m.removeprefix('fluxpart.')}.{n}" for m, n in _STAGES]:
            spent[label].append(0.0)
        start = time.process_time()
        process(frame, site, config)
        totals.append(time.process_time() - start)
    best = min(range(repeats), key=totals.__getitem__)
    return totals[best], {label: values[best] for label, values in spent.items()}, \
        {label: count // repeats for label, count in calls.items()}


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--stages", action="store_true",
                        help="print the CPU time of each pipeline stage of one site-year")
    options = parser.parse_args()
    site = demo.site()
    config = Config()
    one, _ = demo.site_year(seed=0)
    if options.stages:
        total, spent, calls = _stages(one, site, config)
        print(f"process, one site-year, 30 min, defaults: {total:.2f} s CPU (best of 3)")
        for label, seconds in sorted(spent.items(), key=lambda item: -item[1]):
            print(f"  {seconds:6.3f} s  {calls.get(label, 0):2d} call(s)  {label}")
        return
    hourly, _ = demo.site_year(seed=0, interval_minutes=60)
    for label, frame, settings in (("30 min, defaults", one, config),
                                   ("60 min, defaults", hourly, config),
                                   ("no bootstrap    ", one, Config(ustar_bootstrap_draws=0))):
        wall, cpu = _median_seconds(frame, site, settings)
        print(f"process, one site-year, {label} : {wall:6.2f} s wall, {cpu:6.2f} s CPU")
    peak_one = _peak_megabytes(one, site, config)
    print(f"peak memory, one site-year               : {peak_one:6.0f} MB")
    ten, _ = demo.site_year(seed=0, years=10)
    start = time.perf_counter()
    peak_ten = _peak_megabytes(ten, site, config)
    print(f"peak memory, ten years in one call       : {peak_ten:6.0f} MB "
          f"({peak_ten / peak_one:.1f}x one year; {time.perf_counter() - start:.1f} s traced)")


if __name__ == "__main__":
    main()
