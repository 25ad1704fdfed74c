"""Benchmark: how long `import fluxpart` takes, and what a first use of the API pulls in.

Run by hand: ``.venv/bin/python tests/benchmarks/bench_import.py``. Each figure is the
median of several fresh interpreters (``python -X importtime``, whose cumulative
microseconds of the top-level imports are summed), so the shared machine's noise is
damped. Targets (issue 17): ``import fluxpart`` <= 0.5 s; the heavy modules (SciPy's
signal package, statsmodels, matplotlib, Dask) are not imported by it.
"""

from __future__ import annotations

import statistics
import subprocess
import sys

_RUNS = 5
_CASES = {
    "import fluxpart": "import fluxpart",
    "fluxpart.process (first touch)": "import fluxpart; fluxpart.process",
    "numpy + pandas + pyarrow (floor)": "import numpy, pandas, pyarrow",
}
_HEAVY = ("scipy.signal", "statsmodels", "matplotlib", "dask", "xarray")


def _importtime(code: str) -> tuple[float, set[str]]:
    """Seconds of the top-level imports of `code` and the modules it imported."""
    done = subprocess.run([sys.executable, "-X", "importtime", "-c", code],
                          capture_output=True, text=True, check=True)
    total, modules = 0, set()
    for line in done.stderr.splitlines():
        if not line.startswith("import time:") or "|" not in line:
            continue
        _, cumulative, name = line.split("|")
        if cumulative.strip().isdigit():
            modules.add(name.strip())
            if not name.startswith("  "):          # top level: counted once
                total += int(cumulative)
    return total / 1e6, modules


def main() -> None:
    """Print the median import time of each case and the heavy modules it loads."""
    for label, code in _CASES.items():
        runs = [_importtime(code) for _ in range(_RUNS)]
        seconds = statistics.median(r[0] for r in runs)
        heavy = [name for name in _HEAVY if name in runs[0][1]]
        print(f"{label:36s} {seconds:6.3f} s  heavy modules: {', '.join(heavy) or 'none'}")


if __name__ == "__main__":
    main()
