"""Benchmark of ``fluxpart batch``: site-years per minute with 1 and 2 Dask workers.

Run: ``cd /work/main && /work/venv/bin/python tests/benchmarks/bench_batch.py [--sites N]
[--interval 30|60]``. Not collected by pytest (no ``test_`` prefix). Prints figures;
asserts nothing.

The sites are invented Quillmoor site-years (:func:`fluxpart.demo.write_example`,
seeds 0..N-1, grassland and maize alternating) processed with the default settings
(100 u* bootstrap draws and three u* scenarios). Each batch runs on a fresh local
cluster (processes, one thread each, 127.0.0.1) and ``force=True``: "cold" times
include starting and closing the cluster and the workers' first imports, "warm"
times are a second batch on a cluster already running. For comparison, the same sites are
processed one after another in this process without Dask. On Linux the local workers
fork from a server process that has imported fluxpart (``fluxpart.batch._start_method``),
so the cold times include that server's start and imports once.

CPU [s] is the user + system time of this process and of every process it started
(the fork server, the nannies, the workers), sampled every 0.2 s with psutil: a
process that ends between two samples loses at most 0.2 s. On a loaded machine the
wall times depend on the other processes' share of the cores; CPU does not, so the
CPU per site-year of 1 and 2 workers tells what the second worker costs.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import threading
import time
from pathlib import Path

import psutil

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from fluxpart.batch import _client, run_batch  # noqa: E402
from fluxpart.demo import write_example  # noqa: E402
from fluxpart.pipeline import process_site_config  # noqa: E402


def _write_sites(root: Path, count: int, interval_minutes: int) -> Path:
    """Write `count` invented site-years and a network file listing them; return it."""
    for seed in range(count):
        variant = "c3" if seed % 2 == 0 else "c4"
        written = write_example(root / f"tower{seed:02d}", seed=seed, variant=variant,
                                interval_minutes=interval_minutes)
        written.rename(written.with_name(f"tower{seed:02d}.toml"))
    network = root / "SITES.toml"
    network.write_text('[batch]\nsites = ["tower*/*.toml"]\nout = "out"\n', encoding="utf-8")
    return network


class _TreeCPU:
    """CPU seconds (user + system) of this process and all its descendants while in use."""

    def __enter__(self):
        self._seen, self._stop = {}, threading.Event()
        self._start = self._total()
        self._thread = threading.Thread(target=self._sample, daemon=True)
        self._thread.start()
        return self

    def _total(self) -> float:
        me = psutil.Process(os.getpid())
        for process in [me, *me.children(recursive=True)]:
            try:
                times = process.cpu_times()
            except psutil.Error:
                continue
            key = (process.pid, process.create_time())
            self._seen[key] = max(self._seen.get(key, 0.0), times.user + times.system)
        return sum(self._seen.values())

    def _sample(self) -> None:
        while not self._stop.wait(0.2):
            self._total()

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()
        self.seconds = self._total() - self._start


def _serial(root: Path) -> float:
    start = time.perf_counter()
    for config in sorted(root.glob("tower*/*.toml")):
        process_site_config(config).write(root / "serial" / config.stem)
    return time.perf_counter() - start


def main(argv=None) -> None:
    """Print site-years per minute serially and with 1 and 2 workers, and the speed-up."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=8, help="site-years (default: 8)")
    parser.add_argument("--interval", type=int, default=30, choices=(30, 60),
                        help="record interval [min] (default: 30)")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory(prefix="fluxpart-bench-batch-") as folder:
        root = Path(folder)
        network = _write_sites(root, args.sites, args.interval)
        print(f"{args.sites} invented site-years, {args.interval}-minute records, default "
              "settings (100 u* bootstrap draws)")
        print(f"load average at the start: {os.getloadavg()[0]:.1f} on {os.cpu_count()} "
              "core(s)", flush=True)
        with _TreeCPU() as cpu:
            serial = _serial(root)
        rows = [("serial, no Dask", serial, cpu.seconds)]
        for workers in (1, 2):
            with _TreeCPU() as cpu:
                start = time.perf_counter()
                _check(run_batch(network, workers=workers, out=root / f"cold{workers}",
                                 force=True))
                wall = time.perf_counter() - start
            rows.append((f"{workers} worker(s), cold", wall, cpu.seconds))
            client, cluster = _client(None, workers)
            try:
                _check(run_batch(network, scheduler=cluster.scheduler_address,
                                 out=root / f"warm{workers}", force=True))       # warm-up
                with _TreeCPU() as cpu:
                    start = time.perf_counter()
                    _check(run_batch(network, scheduler=cluster.scheduler_address,
                                     out=root / f"warm{workers}", force=True))
                    wall = time.perf_counter() - start
                rows.append((f"{workers} worker(s), warm", wall, cpu.seconds))
            finally:
                client.close()
                cluster.close()
        print(f"{'run':<22}{'wall [s]':>10}{'CPU [s]':>10}{'site-years/min':>16}")
        for name, seconds, cpu_seconds in rows:
            print(f"{name:<22}{seconds:>10.1f}{cpu_seconds:>10.1f}"
                  f"{60 * args.sites / seconds:>16.1f}")
        print(f"load average at the end: {os.getloadavg()[0]:.1f}")
        times = {name: (seconds, cpu_seconds) for name, seconds, cpu_seconds in rows}
        for state in ("cold", "warm"):
            one, two = times[f"1 worker(s), {state}"], times[f"2 worker(s), {state}"]
            print(f"speed-up 2 workers / 1 worker ({state}): {one[0] / two[0]:.2f}x by wall; "
                  f"CPU 2 workers / 1 worker {two[1] / one[1]:.2f}x (1.00: the second "
                  "worker costs no extra CPU; the wall speed-up of an idle 2-core "
                  f"machine is at most about 2 / that = {2 * one[1] / two[1]:.2f}x)")


def _check(report) -> None:
    if report.failed:
        raise SystemExit(f"{report.failed} site(s) failed: {report.failures.to_dict('records')}")

if __name__ == "__main__":
    main()
