"""Benchmark: the report page of one demo site-year, figure by figure and as a command.

Run ``python tests/benchmarks/bench_report.py`` from the repository root
(``--folder DIR`` reports an existing result folder instead of processing the demo;
``--repeats N`` runs the command N times and keeps the smallest CPU time).

Prints, for ``fluxpart.report.build_report`` on one result folder:

- the whole command ``python -m fluxpart report DIR --out PAGE --quiet`` in a fresh
  interpreter (start-up, imports, reading, figures, page and writing included): its
  CPU time (user + system of the child), wall time, and the ratio of its CPU time to
  the NumPy reference workload of ``bench_commands.py`` timed in the same run (the
  issue 17 target is 2 s of CPU, ~25 reference workloads on an idle machine);
- in this process: the CPU time of importing matplotlib, of reading the folder, of
  each figure in a first pass (drawing, palette PNG encoding; texts are rendered
  as they first appear, as in the command), of each figure drawn again (every text
  already rendered), of the page, and each figure's PNG size; the first pass is
  split into building the figure (axes, curves, legends), the tick pass
  (``Drawing.light_ticks``), drawing on the canvas and PNG encoding.

CPU time is the steadier figure on a shared machine; wall time includes waiting for
the cores.
"""

from __future__ import annotations

import argparse
import contextlib
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_commands import run_command, time_reference  # noqa: E402


def _processed_demo(scratch: Path) -> Path:
    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=0)
    result = fluxpart.process(frame, demo.site(), fluxpart.Config())
    directory = scratch / "demo"
    result.write(directory)
    return directory


def _command(directory: Path, scratch: Path, repeats: int) -> None:
    page = scratch / "page-command"
    arguments = [sys.executable, "-m", "fluxpart", "report", str(directory), "--out", str(page),
                 "--quiet"]
    reference, runs = [time_reference()], []
    for _ in range(repeats):
        shutil.rmtree(page, ignore_errors=True)
        runs.append(run_command(arguments))
        reference.append(time_reference())
    unit = statistics.median(reference)
    cpu, wall, rss = min(runs)
    print(f"reference workload {unit:.3f} s CPU; `fluxpart report` (fresh interpreter): "
          f"{cpu:.2f} s CPU ({cpu / unit:.0f} x reference; runs "
          f"{', '.join(f'{r[0]:.2f}' for r in runs)}), {wall:.2f} s wall, {rss:.0f} MB peak")


def _in_process(directory: Path, scratch: Path) -> None:
    from fluxpart.figures import FIGURES, _matplotlib, draw_figures
    from fluxpart.report import _page, interval_minutes, read_written

    cpu = time.process_time()
    _matplotlib()
    print(f"import matplotlib: {time.process_time() - cpu:.2f} s CPU")
    cpu = time.process_time()
    written = read_written(directory)
    print(f"read the folder: {time.process_time() - cpu:.2f} s CPU")
    passes, parts = [], []
    for _ in range(2):
        marks, split = [time.process_time()], []
        with _timed_parts(split):
            figures = draw_figures(written,
                                   lambda marks=marks: marks.append(time.process_time()))
        passes.append([end - start for start, end in zip(marks[:-1], marks[1:], strict=True)])
        parts.append(split)
    print(f"{'figure':24s} {'first':>6s} {'again':>6s} {'PNG KiB':>8s}   first pass: "
          f"{'build':>5s} {'ticks':>5s} {'draw':>5s} {'PNG':>5s}")
    for figure, first, again, (ticks, draw, encode) in zip(figures, *passes, parts[0],
                                                           strict=True):
        print(f"{figure.name:24s} {first:6.2f} {again:6.2f} {len(figure.png) / 1024:8.1f}"
              f"               {first - ticks - draw - encode:5.2f} {ticks:5.2f} {draw:5.2f} "
              f"{encode:5.2f}")
    totals = [sum(column) for column in zip(*parts[0], strict=True)]
    print(f"{'all ' + str(len(FIGURES)) + ' figures':24s} {sum(passes[0]):6.2f} "
          f"{sum(passes[1]):6.2f} {'':8s}               "
          f"{sum(passes[0]) - sum(totals):5.2f} {totals[0]:5.2f} {totals[1]:5.2f} "
          f"{totals[2]:5.2f}")
    cpu = time.process_time()
    page = _page(written, directory, figures, interval_minutes(written.timeseries.index))
    print(f"page: {time.process_time() - cpu:.2f} s CPU, report.html "
          f"{len(page.encode('utf-8')) / 1e6:.2f} MB")


@contextlib.contextmanager
def _timed_parts(split: list):
    """Append (tick pass, canvas drawing, PNG encoding) CPU seconds per figure to `split`."""
    from fluxpart.figures import Drawing

    def timed(function):
        def run(*args, **kwargs):
            start = time.process_time()
            try:
                return function(*args, **kwargs)
            finally:
                spent[function.__name__] += time.process_time() - start
        return run

    spent = {}
    light_ticks, encode, png = Drawing.light_ticks, Drawing.encode, Drawing.png

    def figure_png(self, figure):
        spent.update(light_ticks=0.0, encode=0.0, png=0.0)
        data = timed(png)(self, figure)
        split.append((spent["light_ticks"], spent["png"] - spent["light_ticks"]
                      - spent["encode"], spent["encode"]))
        return data

    Drawing.light_ticks, Drawing.encode = timed(light_ticks), staticmethod(timed(encode))
    Drawing.png = figure_png
    try:
        yield
    finally:
        Drawing.light_ticks, Drawing.encode, Drawing.png = light_ticks, staticmethod(encode), png


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--folder", type=Path, help="an existing result folder to report")
    parser.add_argument("--repeats", type=int, default=3,
                        help="runs of the command; the smallest CPU time is kept")
    options = parser.parse_args()
    with tempfile.TemporaryDirectory() as scratch:
        scratch = Path(scratch)
        directory = options.folder or _processed_demo(scratch)
        _command(directory, scratch, options.repeats)
        _in_process(directory, scratch)


if __name__ == "__main__":
    main()
