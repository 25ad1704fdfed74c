"""Benchmark: whole-command times of the CLI against a fixed NumPy reference workload.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/bench_commands.py``
(``--repeats N`` runs each command N times and keeps the smallest CPU time;
``--processing 'daytime_curvature = "average"'`` adds settings to the runs' ``[processing]``).

Prints, in one run, for each command started as a fresh interpreter (start-up and
imports included): its CPU time (user + system of the child, from ``os.wait4``), its
wall time and its peak resident memory, and the ratio of its CPU time to the CPU time
of a fixed NumPy reference workload timed in the same run. The ratio is the figure to
compare between machines and between loaded and idle runs: on a shared machine the
wall time mostly measures waiting for a core, and CPU times inflate by roughly the
same factor for the reference and the commands.

Commands: ``import fluxpart``; ``fluxpart run`` of one invented demo site-year
(the Quillmoor example written by :func:`fluxpart.demo.write_example`) and of ten
site-years in one file and one run; ``fluxpart report`` of the one-year result; and the
one-year run again with a bytecode cache (where ``PYTHONDONTWRITEBYTECODE`` is set, as on
this project's machine, every other row recompiles fluxpart's modules at start-up).

``--stages`` instead prints where the CPU time of one cold ``fluxpart run`` of the
one-year example goes, each in a fresh interpreter (best of ``--repeats``): the start-up
imports of NumPy, pandas and pyarrow, of fluxpart's own modules, and the command's stages
(reading, each pipeline stage, writing), each also as a multiple of the reference
workload. Cold figures include first-call costs (pandas' lazy imports, caches) that
``bench_process.py --stages``, which times warm repeats, does not.

Targets (issue 17): ``run`` of one site-year <= 10 reference workloads (~0.8 s CPU on
an idle 2-core machine); ten site-years <= 5x one; ``import fluxpart`` <= 0.5 s;
``report`` <= 2 s; peak memory of one site-year <= 250 MB RSS.

The reference workload is a per-gap similarity loop over one half-hourly year, the
shape of the work of marginal distribution sampling: for every 4th record, the
records within +-7 days whose radiation, temperature and VPD are close to its own,
and the mean NEE of those. Its inputs are drawn from a seeded generator, so it is the
same work in every run.
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

_RECORDS = 17520                 # one half-hourly year
_WINDOW = 7 * 48                 # +-7 days of half-hours
_GAP_STEP = 4                    # every 4th record is treated as a gap
_REFERENCE_REPEATS = 7


def reference_workload() -> float:
    """Run the fixed per-gap similarity loop once; return a checksum of its output."""
    rng = np.random.default_rng(20261202)
    day = np.arange(_RECORDS) / 48.0
    rg = np.clip(600.0 * np.sin(2 * np.pi * (day % 1.0 - 0.25)), 0, None) \
        * rng.uniform(0.3, 1.0, _RECORDS)
    tair = 10.0 - 10.0 * np.cos(2 * np.pi * day / 365.0) + rng.normal(0, 3, _RECORDS)
    vpd = np.clip(rng.gamma(2.0, 4.0, _RECORDS), 0, None)
    nee = -0.02 * rg + 2.0 + rng.normal(0, 2, _RECORDS)
    out = np.full(_RECORDS, np.nan)
    for gap in range(0, _RECORDS, _GAP_STEP):
        lo, hi = max(0, gap - _WINDOW), min(_RECORDS, gap + _WINDOW + 1)
        similar = ((np.abs(rg[lo:hi] - rg[gap]) <= 50.0)
                   & (np.abs(tair[lo:hi] - tair[gap]) <= 2.5)
                   & (np.abs(vpd[lo:hi] - vpd[gap]) <= 5.0))
        similar[gap - lo] = False
        if similar.any():
            out[gap] = nee[lo:hi][similar].mean()
    return float(np.nansum(out))


def time_reference() -> float:
    """Smallest CPU time [s] of the reference workload over a few repeats."""
    times = []
    for _ in range(_REFERENCE_REPEATS):
        start = time.process_time()
        reference_workload()
        times.append(time.process_time() - start)
    return min(times)


def run_command(arguments: list[str], env: dict | None = None) -> tuple[float, float, float]:
    """CPU [s], wall [s] and peak RSS [MB] of one child process (checked to succeed)."""
    wall = time.perf_counter()
    child = subprocess.Popen(arguments, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                             env=env)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.perf_counter() - wall
    child.returncode = os.waitstatus_to_exitcode(status)
    error = child.stderr.read().decode(errors="replace")
    child.stderr.close()
    if child.returncode != 0:
        raise SystemExit(f"{' '.join(arguments)} failed ({child.returncode}):\n{error}")
    return usage.ru_utime + usage.ru_stime, wall, usage.ru_maxrss / 1024.0


# The child of --stages: times the start-up imports, then runs the command with each stage
# function wrapped (CPU seconds, time.process_time since the interpreter started), and
# writes the figures as JSON to the file named by its first argument.
_STAGE_CHILD = r"""
import contextlib, functools, importlib, io, json, sys, time
started = time.process_time()
import numpy, pandas, pyarrow, pyarrow.parquet  # noqa: E401
libraries = time.process_time()
from fluxpart import cli
import fluxpart.io, fluxpart.pipeline, fluxpart.resultdir  # noqa: E401
own = time.process_time()
spent = {}
STAGES = [("fluxpart.io", "SiteConfig.read", "read the input"),
          ("fluxpart.pipeline", "process", "process (all stages)"),
          ("fluxpart.screening_stage", "clock_and_preflight", "  clock and preflight"),
          ("fluxpart.respiration_driver", "chosen_temperature", "  respiration temperature"),
          ("fluxpart.ustar_stage", "ustar_thresholds", "  u* threshold and bootstrap"),
          ("fluxpart.ustar_runs", "fill_and_partition", "  fill and partition (u* runs)"),
          ("fluxpart.gapfill", "fill_marginal", "    NEE fills"),
          ("fluxpart.partition.nighttime", "partition_nighttime", "    nighttime"),
          ("fluxpart.partition.daytime", "partition_daytime", "    daytime"),
          ("fluxpart.uncertainty_assembly", "budget_uncertainty", "  uncertainty"),
          ("fluxpart.pipeline", "Result.write", "write the result folder")]
def timed(label, function):
    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        start = time.process_time()
        try:
            return function(*args, **kwargs)
        finally:
            spent[label] = spent.get(label, 0.0) + time.process_time() - start
    return wrapper
for module_name, name, label in STAGES:
    owner = importlib.import_module(module_name)
    *path, attribute = name.split(".")
    for part in path:
        owner = getattr(owner, part)
    setattr(owner, attribute, timed(label, getattr(owner, attribute)))
with contextlib.redirect_stdout(io.StringIO()):
    cli.main(sys.argv[2:])
figures = {"start-up: numpy, pandas, pyarrow": libraries - started,
           "start-up: fluxpart's modules": own - libraries,
           **{label: spent[label] for _, _, label in STAGES if label in spent},
           "whole command (in-process CPU)": time.process_time()}
with open(sys.argv[1], "w") as handle:
    json.dump(figures, handle)
"""


def print_stages(repeats: int) -> None:
    """CPU of each stage of one cold `fluxpart run` of the one-year example (best of repeats)."""
    import json

    with tempfile.TemporaryDirectory() as scratch:
        scratch = Path(scratch)
        one_year, _ = write_inputs(scratch)
        best: dict = {}
        reference = [time_reference()]
        for _ in range(repeats):
            shutil.rmtree(scratch / "out", ignore_errors=True)
            subprocess.run([sys.executable, "-c", _STAGE_CHILD, str(scratch / "stages.json"),
                            "run", str(one_year), "--out", str(scratch / "out"), "--quiet"],
                           check=True)
            figures = json.loads((scratch / "stages.json").read_text())
            for label, seconds in figures.items():
                best[label] = min(best.get(label, seconds), seconds)
            reference.append(time_reference())
    unit = statistics.median(reference)
    print(f"reference workload: {unit:.3f} s CPU (median of {len(reference)} timings); load "
          f"average {os.getloadavg()[0]:.1f}; best of {repeats} cold runs, fresh interpreters")
    for label, seconds in best.items():
        print(f"  {seconds:6.3f} s  {seconds / unit:5.1f} x ref  {label}")


def write_inputs(directory: Path, processing: str = "") -> tuple[Path, Path]:
    """Site configs of the one-year Quillmoor example and of a ten-year file in its layout,
    with the ``[processing]`` lines `processing` (TOML) added to both."""
    from fluxpart import demo

    one = demo.write_example(directory / "one")
    if processing:
        text = one.read_text()
        one.write_text(text.replace("[processing]\n", f"[processing]\n{processing}\n", 1))
    frame, _ = demo.site_year(seed=0, years=10)
    ten = directory / "ten"
    ten.mkdir()
    ends = frame.index + np.timedelta64(30, "m")
    columns = {demo._FILE_TIME_COLUMN: np.asarray(ends.strftime(demo._FILE_TIME_FORMAT),
                                                  dtype=str)}
    for name, (column, unit, decimals) in demo._FILE_COLUMNS.items():
        values = frame[name].to_numpy(dtype=float)
        columns[column] = demo._format_column(values / 10.0 if unit == "kPa" else values,
                                              decimals)
    lines = [",".join(columns)] + [",".join(row) for row in
                                   np.column_stack(list(columns.values())).tolist()]
    (ten / one.with_suffix(".csv").name).write_text("\n".join(lines) + "\n")
    (ten / one.name).write_text(one.read_text())
    return one, ten / one.name


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=1,
                        help="runs of each command; the smallest CPU time is kept")
    parser.add_argument("--stages", action="store_true",
                        help="print the CPU time of each stage of one cold `run` instead")
    parser.add_argument("--write-inputs", metavar="DIR", help=argparse.SUPPRESS)
    parser.add_argument("--processing", default="",
                        help="[processing] lines (TOML, \\n between them) for both runs, "
                             "e.g. 'daytime_curvature = \"average\"'")
    options = parser.parse_args()
    processing = options.processing.replace("\\n", "\n")
    if options.stages:
        print_stages(options.repeats)
        return
    if options.write_inputs:
        print(*write_inputs(Path(options.write_inputs), processing))
        return
    repeats = options.repeats
    python = sys.executable
    with tempfile.TemporaryDirectory() as scratch:
        scratch = Path(scratch)
        # written by a child process, so this one stays small: a child's peak RSS
        # (ru_maxrss) cannot be below the RSS of the process that started it
        inputs = subprocess.run(
            [python, __file__, "--write-inputs", str(scratch), "--processing", processing],
            check=True,
            capture_output=True, text=True).stdout.split()
        one_year, ten_years = map(Path, inputs)
        commands = {
            "import fluxpart": [python, "-c", "import fluxpart"],
            "run, one site-year": [python, "-m", "fluxpart", "run", str(one_year),
                                   "--out", str(scratch / "out1"), "--quiet"],
            "run, ten site-years": [python, "-m", "fluxpart", "run", str(ten_years),
                                    "--out", str(scratch / "out10"), "--quiet"],
            "report, one site-year": [python, "-m", "fluxpart", "report",
                                      str(scratch / "out1"), "--out",
                                      str(scratch / "page"), "--quiet"],
        }
        # With PYTHONDONTWRITEBYTECODE set (as on this project's machine) every start
        # compiles fluxpart's own modules again (~0.3 s); an installed package has them
        # compiled. This row runs with a bytecode cache in the scratch folder, filled by
        # one warm-up run, to show the difference.
        cached = {key: value for key, value in os.environ.items()
                  if key != "PYTHONDONTWRITEBYTECODE"}
        cached["PYTHONPYCACHEPREFIX"] = str(scratch / "bytecode")
        commands["run, one year, bytecode cached"] = commands["run, one site-year"]
        environments = {"run, one year, bytecode cached": cached}
        run_command(commands["run, one site-year"][:-3] + ["--out", str(scratch / "warm"),
                                                           "--quiet"], env=cached)
        reference = [time_reference()]
        figures = {}
        for label, arguments in commands.items():
            runs = []
            for _ in range(repeats):
                if "--out" in arguments:       # each run starts from no output folder
                    shutil.rmtree(arguments[arguments.index("--out") + 1], ignore_errors=True)
                runs.append(run_command(arguments, env=environments.get(label)))
            figures[label] = min(runs)
            reference.append(time_reference())
    unit = statistics.median(reference)
    load = os.getloadavg()[0]
    print(f"reference workload: {unit:.3f} s CPU (median of {len(reference)} timings, "
          f"range {min(reference):.3f}-{max(reference):.3f}); load average {load:.1f}")
    floor = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(f"peak MB of a child includes this script's own {floor:.0f} MB (its floor); "
          f"PYTHONDONTWRITEBYTECODE={os.environ.get('PYTHONDONTWRITEBYTECODE', '')!r}")
    print(f"{'command':31s} {'CPU s':>7s} {'wall s':>7s} {'x ref':>7s} {'peak MB':>8s}")
    for label, (cpu, wall, rss) in figures.items():
        print(f"{label:31s} {cpu:7.2f} {wall:7.2f} {cpu / unit:7.1f} {rss:8.0f}")
    one = figures["run, one site-year"][0]
    print(f"ten site-years / one site-year (CPU): {figures['run, ten site-years'][0] / one:.1f}x")


if __name__ == "__main__":
    main()
