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
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

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
        serial = _serial(root)
        rows = [("serial, no Dask", serial)]
        for workers in (1, 2):
            start = time.perf_counter()
            _check(run_batch(network, workers=workers, out=root / f"cold{workers}", force=True))
            rows.append((f"{workers} worker(s), cold", time.perf_counter() - start))
            client, cluster = _client(None, workers)
            try:
                _check(run_batch(network, scheduler=cluster.scheduler_address,
                                 out=root / f"warm{workers}", force=True))       # warm-up
                start = time.perf_counter()
                _check(run_batch(network, scheduler=cluster.scheduler_address,
                                 out=root / f"warm{workers}", force=True))
                rows.append((f"{workers} worker(s), warm", time.perf_counter() - start))
            finally:
                client.close()
                cluster.close()
        print(f"{'run':<22}{'wall [s]':>10}{'site-years/min':>16}")
        for name, seconds in rows:
            print(f"{name:<22}{seconds:>10.1f}{60 * args.sites / seconds:>16.1f}")
        times = dict(rows)
        for state in ("cold", "warm"):
            ratio = times[f"1 worker(s), {state}"] / times[f"2 worker(s), {state}"]
            print(f"speed-up 2 workers / 1 worker ({state}): {ratio:.2f}x")


def _check(report) -> None:
    if report.failed:
        raise SystemExit(f"{report.failed} site(s) failed: {report.failures.to_dict('records')}")

if __name__ == "__main__":
    main()
