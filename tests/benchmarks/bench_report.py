"""Benchmark: the report page of one demo site-year, figure by figure.

Run ``python tests/benchmarks/bench_report.py`` from the repository root. Processes
the invented demo site-year once (not timed), writes it to a temporary folder and
prints, for ``fluxpart.report.build_report`` on that folder: the CPU and wall time
of reading the folder, of each figure (drawing and palette PNG encoding) and of the
whole build, each figure's PNG size and the size of ``report.html``. CPU time is
the steadier figure on a shared machine; wall time includes waiting for the cores.
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

import fluxpart
from fluxpart import demo
from fluxpart.figures import FIGURES, draw_figures
from fluxpart.report import build_report, read_written


def main() -> None:
    frame, _ = demo.site_year(seed=0)
    result = fluxpart.process(frame, demo.site(), fluxpart.Config())
    with tempfile.TemporaryDirectory() as scratch:
        directory = Path(scratch) / "demo"
        result.write(directory)
        cpu, wall = time.process_time(), time.perf_counter()
        written = read_written(directory)
        print(f"read the folder: {time.process_time() - cpu:.2f} s CPU, "
              f"{time.perf_counter() - wall:.2f} s wall")
        marks = [time.process_time()]

        def tick():
            marks.append(time.process_time())

        figures = draw_figures(written, tick)
        for figure, start, end in zip(figures, marks[:-1], marks[1:], strict=True):
            print(f"{figure.name:24s} {end - start:5.2f} s CPU {len(figure.png) / 1024:7.1f} KiB")
        cpu, wall = time.process_time(), time.perf_counter()
        page = build_report(directory, Path(scratch) / "page")
        print(f"build_report, {len(FIGURES)} figures + page: {time.process_time() - cpu:.2f} s "
              f"CPU, {time.perf_counter() - wall:.2f} s wall (in this process: matplotlib "
              "already imported)")
        print(f"report.html: {page.stat().st_size / 1e6:.2f} MB")


if __name__ == "__main__":
    main()
