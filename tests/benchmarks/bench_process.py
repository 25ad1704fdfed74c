"""Benchmark: the whole `fluxpart.process` of demo site-years (run by hand, not by pytest).

Prints the median wall time of one site-year (30 min and 60 min), the peak memory of one
site-year and of ten years in one call (tracemalloc, Python-level allocations including
NumPy buffers), and the memory ratio of ten years to one.

    python tests/benchmarks/bench_process.py
"""

import statistics
import time
import tracemalloc

from fluxpart import Config, demo, process


def _median_seconds(frame, site, config, repeats=3):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        process(frame, site, config)
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def _peak_megabytes(frame, site, config):
    tracemalloc.start()
    process(frame, site, config)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def main():
    site = demo.site()
    config = Config()
    one, _ = demo.site_year(seed=0)
    hourly, _ = demo.site_year(seed=0, interval_minutes=60)
    print(f"process, one site-year, 30 min, defaults : {_median_seconds(one, site, config):6.2f} s")
    print(f"process, one site-year, 60 min, defaults : {_median_seconds(hourly, site, config):6.2f} s")
    quick = Config(ustar_bootstrap_draws=0)
    print(f"process, one site-year, no bootstrap     : {_median_seconds(one, site, quick):6.2f} s")
    peak_one = _peak_megabytes(one, site, config)
    print(f"peak memory, one site-year               : {peak_one:6.0f} MB")
    ten, _ = demo.site_year(seed=0, years=10)
    start = time.perf_counter()
    peak_ten = _peak_megabytes(ten, site, config)
    print(f"peak memory, ten years in one call       : {peak_ten:6.0f} MB "
          f"({peak_ten / peak_one:.1f}x one year; {time.perf_counter() - start:.1f} s traced)")


if __name__ == "__main__":
    main()
