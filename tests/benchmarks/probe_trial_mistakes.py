"""Probe: round mistakes53's NEE mistakes planted in trial 27's invented sites.

INVENTED DATA: trial 27's sites are fictional (``trial_twentyseventh.simulate``, first
draw). Each case edits the simulated records before they are written as the site's logger
file, runs ``fluxpart check`` and ``fluxpart run`` and prints the check's new problems and
the moves of the annual NEE, GPP and Reco against the clean run's stated 1 sigma.

    PYTHONPATH=$PWD python tests/benchmarks/probe_trial_mistakes.py --sites H E --out DIR
"""
from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import trial_twentyseventh as trial  # noqa: E402
from probe_settings_mistakes import SUMS  # noqa: E402


def _nee(edit):
    def apply(data):
        out = data.copy()
        out["nee"] = edit(data)
        return out
    return apply


def _without_density_terms(data):
    """The Webb et al. (1980) terms left out, as ``probe_data_mistakes``'s case (m)."""
    rg = data["rg"].fillna(0.0).clip(lower=0.0)
    return data["nee"] - (0.0485 * (0.3 * rg - 15.0) + 0.0093 * 0.3 * rg)


def _year_late(data):
    out = data.copy()
    out.index = data.index + pd.DateOffset(years=1)
    return out


CASES = {"clean": lambda d: d,
         "NEE gain x1.2": _nee(lambda d: d["nee"] * 1.2),
         "NEE gain x2.0": _nee(lambda d: d["nee"] * 2.0),
         "open-path NEE without density terms": _nee(_without_density_terms),
         "stamped a year late": _year_late}


def _problems(text: str) -> list[str]:
    lines = text.splitlines()
    start = next((i for i, line in enumerate(lines) if line.startswith("problems found")), None)
    return [] if start is None else [line.strip() for line in lines[start + 1:]
                                     if line.startswith("  - ")]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--sites", nargs="*", default=["H", "E"])
    parser.add_argument("--out", default="/tmp/fluxpart-trial-mistakes")
    args = parser.parse_args(argv)
    for key in args.sites:
        site = trial.SITES[key]
        data, _ = trial.simulate(site, frozenset(), 0)
        base, clean_problems = None, []
        for name, edit in CASES.items():
            folder = Path(args.out) / f"{key}_{''.join(c for c in name if c.isalnum())}"
            folder.mkdir(parents=True, exist_ok=True)
            toml = trial.write_site(site, edit(data), folder, "")
            check = subprocess.run([sys.executable, "-m", "fluxpart", "check", toml],
                                   cwd=folder, capture_output=True, text=True)
            run = subprocess.run([sys.executable, "-m", "fluxpart", "run", toml, "--out",
                                  str(folder / "result")], cwd=folder, capture_output=True,
                                 text=True)
            if run.returncode:
                print(f"{key} {name}: run exit {run.returncode}: {run.stderr.strip()[-300:]}")
                continue
            row = pd.read_parquet(folder / "result" / "annual.parquet").iloc[0]
            problems = _problems(check.stdout)
            if base is None:
                base, clean_problems = row, problems
                print(f"{key} clean: " + ", ".join(
                    f"{s} {row[s]:.1f} (1σ {row[s + '_uncertainty_total']:.1f})" for s in SUMS))
                continue
            new = [p for p in problems if p not in clean_problems]
            moves = ", ".join(f"{s} {row[s] - base[s]:+.1f} "
                              f"({(row[s] - base[s]) / base[s + '_uncertainty_total']:+.1f}σ)"
                              for s in SUMS)
            print(f"{key} {name}: {'WARNED' if new else 'SILENT'} (check exit "
                  f"{check.returncode}) {moves}")
            for problem in new:
                print(f"    {problem[:300]}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
