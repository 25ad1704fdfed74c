"""Probe: a network manager's mistakes with ``fluxpart batch`` (round mistakes46).

Each case edits a copy of the example network (``examples/network.toml``: the
grassland example and the three hourly towers of ``examples/network/``, plus an
invented fifth tower 5 degrees south, all FICTIONAL), runs ``fluxpart batch`` on it and prints whether it was refused (the
``error:`` line), warned (warnings against the clean batch) or silent, and the
largest move of a site's annual NEE against that site's stated 1 sigma (its 95 %
interval's half-width / 1.96).

    PYTHONPATH=$PWD python tests/benchmarks/probe_network_mistakes.py [--only NAME ...]

About 10 s per case on one core.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import pandas as pd

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"
TOWERS = ("north_meadow", "south_maize", "east_meadow")


#: Latitude of the invented fifth tower, 5 degrees south of the other four [degrees N]
SOUTH_LATITUDE = 44.3


def _network(root: Path) -> None:
    """The example network plus an invented tower at :data:`SOUTH_LATITUDE` (the demo's
    grassland moved south, seed 14), so that two towers differ in latitude."""
    import dataclasses

    from fluxpart import demo

    shutil.copytree(EXAMPLES, root)
    variant = demo._VARIANTS["c3"]
    original = variant["site"]
    variant["site"] = dataclasses.replace(original, latitude=SOUTH_LATITUDE)
    try:
        written = demo.write_example(root / "network" / "low_meadow", seed=14,
                                     interval_minutes=60)
    finally:
        variant["site"] = original
    config = written.rename(written.with_name("low_meadow.toml"))
    _set(config, "site", "name", '"Quillmoor low meadow (fictional)"')


def _set(path: Path, section: str, key: str, value: str) -> None:
    """Set ``key = value`` in ``[section]`` of a TOML file (replacing the key's line)."""
    text = path.read_text(encoding="utf-8")
    head = text.index(f"[{section}]\n")
    end = text.find("\n[", head + 1)
    end = len(text) if end < 0 else end
    block = text[head:end]
    pattern = re.compile(rf"^{key}\s*=.*$", re.M)
    block = (pattern.sub(f"{key} = {value}", block) if pattern.search(block)
             else block.rstrip("\n") + f"\n{key} = {value}\n")
    path.write_text(text[:head] + block + text[end:], encoding="utf-8")


def _tower(root: Path, name: str) -> Path:
    return root / "network" / name / f"{name}.toml"


def _sites(root: Path, extra: str) -> None:
    network = root / "network.toml"
    text = network.read_text(encoding="utf-8")
    network.write_text(text.replace('"network/*/*.toml",', f'"network/*/*.toml", {extra}'),
                       encoding="utf-8")


def _swap(root: Path, first: str = "north_meadow", second: str = "east_meadow") -> None:
    _set(_tower(root, first), "input", "path", f'"../{second}/quillmoor_grassland_60min.csv"')
    _set(_tower(root, second), "input", "path", f'"../{first}/quillmoor_grassland_60min.csv"')


CASES = {
    # a config copied from a tower 5 degrees south, its [site] left unchanged
    "latitude copied (5 deg off)": lambda r: _set(_tower(r, "east_meadow"), "site",
                                                  "latitude", "44.3"),
    "latitude copied (12 deg off)": lambda r: _set(_tower(r, "east_meadow"), "site",
                                                   "latitude", "37.3"),
    "utc_offset copied (+1 h)": lambda r: _set(_tower(r, "east_meadow"), "site",
                                               "utc_offset", "2.0"),
    "longitude copied (15 deg off)": lambda r: _set(_tower(r, "east_meadow"), "site",
                                                    "longitude", "25.2"),
    "two sites, one data file": lambda r: _set(
        _tower(r, "north_meadow"), "input", "path",
        '"../east_meadow/quillmoor_grassland_60min.csv"'),
    "files swapped (same latitude)": _swap,
    "files swapped (5 deg apart)": lambda r: _swap(r, "low_meadow", "east_meadow"),
    "one file copied over another (5 deg apart)": lambda r: shutil.copy(
        r / "network" / "east_meadow" / "quillmoor_grassland_60min.csv",
        r / "network" / "low_meadow" / "quillmoor_grassland_60min.csv"),
    "site listed twice (glob + path)": lambda r: _sites(
        r, '"network/east_meadow/east_meadow.toml",'),
    "site listed twice (copy of config)": lambda r: shutil.copy(
        _tower(r, "east_meadow"), r / "network" / "east_meadow" / "east_meadow_copy.toml"),
    "canopy copied from a forest": lambda r: _set(_tower(r, "north_meadow"), "site",
                                                  "canopy", '"tall"'),
    "u* setting changed at one site": lambda r: (
        _set(_tower(r, "north_meadow"), "processing", "ustar_method", '"fixed"'),
        _set(_tower(r, "north_meadow"), "processing", "ustar_threshold", "0.3")),
    "input path relative to the network file": lambda r: _set(
        _tower(r, "north_meadow"), "input", "path",
        '"network/north_meadow/quillmoor_grassland_60min.csv"'),
    "seed copied (all 0) -> another seed": lambda r: _set(_tower(r, "east_meadow"),
                                                          "processing", "seed", "7"),
    "[batch] ustar_method (network override)": lambda r: (r / "network.toml").write_text(
        (r / "network.toml").read_text(encoding="utf-8") + 'ustar_method = "fixed"\n',
        encoding="utf-8"),
}


def _batch(root: Path) -> tuple[int, str, pd.DataFrame | None]:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, "-m", "fluxpart", "batch", "network.toml",
                           "--workers", "1"], cwd=root, env=env, capture_output=True,
                          text=True, check=False)
    annual = None
    folder = root / "network-output" / "network_annual"
    if done.returncode == 0 and folder.is_dir():
        annual = pd.read_parquet(folder).reset_index()
        annual["site"] = annual["site"].astype(str)
        annual = annual.set_index("site")
    return done.returncode, done.stdout + done.stderr, annual


def _lines(output: str, prefix: str) -> list[str]:
    return [line for line in output.splitlines() if line.startswith(prefix)]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--only", nargs="*", default=None)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as scratch:
        clean_root = Path(scratch) / "clean"
        _network(clean_root)
        code, output, clean = _batch(clean_root)
        if clean is None:
            print(output)
            return 1
        clean_warnings = set(_lines(output, "warning:"))
        sigma = (clean["nee_ci95_high"] - clean["nee_ci95_low"]) / (2 * 1.96)
        for line in sorted(clean_warnings):
            print(f"    clean: {line[:300]}")
        print(f"clean: {len(clean)} sites, {len(clean_warnings)} warning(s); "
              f"1 sigma of NEE {sigma.min():.1f}-{sigma.max():.1f} g C m-2")
        for name, edit in CASES.items():
            if args.only and not any(word in name for word in args.only):
                continue
            root = Path(scratch) / "case"
            shutil.rmtree(root, ignore_errors=True)
            _network(root)
            edit(root)
            code, output, annual = _batch(root)
            if code != 0:
                print(f"{name}: REFUSED (exit {code}) {(_lines(output, 'error:') or [''])[0]}")
                continue
            new = [w for w in _lines(output, "warning:") if w not in clean_warnings]
            moves = []
            for site in annual.index.unique():
                base = site if site in clean.index else None
                if base is None:
                    continue
                delta = float(annual.loc[[site], "nee"].iloc[0] - clean.loc[site, "nee"])
                moves.append((abs(delta) / sigma[base], site, delta))
            worst = max(moves) if moves else (0.0, "-", 0.0)
            state = "WARNED" if new else "silent"
            print(f"{name}: {state}; sites {len(annual)}; largest move {worst[1]} "
                  f"{worst[2]:+.1f} g C m-2 = {worst[0]:.1f} sigma")
            for line in new:
                print(f"    {line[:300]}")
        if not args.only or any("older" in word for word in args.only):
            _older_release(clean_root)
    return 0


def _older_release(root: Path) -> None:
    """A result folder of an older release left in the output folder: its manifest's
    release and code fingerprint edited, then the batch run again."""
    manifest = root / "network-output" / "east_meadow" / "manifest.json"
    recorded = json.loads(manifest.read_text(encoding="utf-8"))
    recorded["versions"]["fluxpart"] = "0.30.0"
    recorded["code"]["sha256"] = "0" * 64
    manifest.write_text(json.dumps(recorded), encoding="utf-8")
    code, output, _ = _batch(root)
    reasons = [line for line in output.splitlines() if "east_meadow (" in line]
    print(f"result folder of an older release: exit {code}; "
          f"{reasons[0][:200] if reasons else 'SILENTLY REUSED'}")


if __name__ == "__main__":
    sys.exit(main())
