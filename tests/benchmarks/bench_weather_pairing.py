"""Does NEE follow this record's own clouds? Measured on honest and mispaired records.

Round mistakes45. Two silent mistakes of the data a tower team hands over pair NEE with
weather that is not its own: a neighbouring site's NEE (or a month of it) pasted beside
this site's weather, and another year's weather columns joined to this year's NEE. Both
keep the sun's course (the same latitude and dates), so NEE still rises and falls with
the day's light; what they lose is the response to this record's clouds.

Per record it prints the three measures of :mod:`fluxpart.weather_pairing` (``q`` of
the levels and of record-to-record changes, each with its standard error; the gain and
``z`` of the own weather's free fit over the shifted weather's) and whether
``weather_of_another_record`` names it; with ``--months`` also the months the same rule
names on each calendar month alone (measured, not landed). ``scale`` lines give what a
doubled NEE changes (99th percentile of uptake in sun above 500 W m-2, median night NEE
at 8-12 degC air, the paired records' random error of fluxes below 2 µmol m-2 s-1),
honest and x2. A tally of calls per kind closes the output.

Planted on generated site-years (``scenarios`` 0-39, ``bench_generalisation`` 0-13,
``bench_other_physics`` 0-13; each with the next site-year of its set and interval): the
other site-year's NEE, its weather (Rg, VPD, tair), and its July NEE alone. The
grassland and maize examples (fictional): July's NEE of the invented maize field (demo
c4 seed 7) and the weather of another seed (demo seed 5), as
``probe_data_mistakes.py`` plants them. Honest trial sites: every site TOML under the
folders given with ``--trials`` that reads (folders the trials write with ``--out``).

Round mistakes45 (2026-12-05): honest 0 of 70 and 0 of 105 trial site files named (3
not judged); the next site-year's NEE named in 54 of 68, its weather in 50 of 68, its
July NEE in 2 of 70; with ``--months`` the planted July in 27 of 70, but a month of 12
of 105 honest trial site files. About 2 min (``--months`` about 4).

    PYTHONPATH=$PWD python tests/benchmarks/bench_weather_pairing.py [--trials DIR ...] [--months]
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_prefilter_vpd_zero import site_years  # noqa: E402

from fluxpart import weather_pairing  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
MONTHS = "--months" in sys.argv


def figures(frame, nee=None, weather=None):
    """(q, se, q of changes, se, gain, z, called) of ``frame`` (NEE or weather replaced)."""
    nee = (frame["nee"].to_numpy(dtype=float) if nee is None else nee).copy()
    if "nee_flag" in frame.columns:
        nee[frame["nee_flag"].to_numpy() != 0] = np.nan
    source = frame if weather is None else weather
    drivers = [c for c in ("rg", "vpd", "tair") if c in source.columns]
    columns = {c: source[c].to_numpy(dtype=float) for c in drivers}
    q, se = weather_pairing.cloud_response(nee, columns["rg"], frame.index)
    qc, sec = weather_pairing.cloud_response(nee, columns["rg"], frame.index, changes=True)
    gain, z = weather_pairing.own_weather_gain(
        nee, np.column_stack([columns[c] for c in drivers]), frame.index)
    called = weather_pairing.weather_of_another_record(
        nee, columns["rg"], frame.index, columns.get("vpd"), columns.get("tair")) is not None
    if MONTHS:
        # the same rule on each calendar month alone (measured, not landed)
        keys = frame.index.year * 100 + frame.index.month
        months = [int(k) for k in np.unique(keys)
                  if weather_pairing.weather_of_another_record(
                      nee[keys == k], columns["rg"][keys == k], frame.index[keys == k],
                      *(columns[c][keys == k] if c in columns else None
                        for c in ("vpd", "tair"))) is not None]
        print(f"months   called {months}")
    return q, se, qc, sec, gain, z, called


def other_nee(frame, other, months=None):
    """``frame``'s NEE with ``other``'s (flag 0) at the same positions, or in ``months``."""
    nee = frame["nee"].to_numpy(dtype=float).copy()
    theirs = other["nee"].to_numpy(dtype=float).copy()
    if "nee_flag" in other.columns:
        theirs[other["nee_flag"].to_numpy() != 0] = np.nan
    n = min(len(nee), len(theirs))
    where = np.zeros(len(nee), dtype=bool)
    where[:n] = True if months is None else frame.index[:n].month.isin(months)
    nee[where] = theirs[:n][where[:n]]
    return nee


def aligned(frame, other):
    """``other``'s weather at ``frame``'s positions (NaN beyond its end)."""
    out = frame.copy()
    n = min(len(frame), len(other))
    for column in ("rg", "vpd", "tair"):
        values = np.full(len(frame), np.nan)
        values[:n] = other[column].to_numpy(dtype=float)[:n]
        out[column] = values
    return out


TALLY = {}


def _row(kind, name, values):
    q, se, qc, sec, gain, z, called = values
    TALLY.setdefault(kind, []).append((name, called))
    print(f"{kind:8s} {name:44s} q {q:6.2f} ± {se:4.2f}  changes {qc:6.2f} ± {sec:4.2f}  "
          f"gain {gain:6.3f} z {z:6.1f}  {'CALLED' if called else ''}")


def scale_figures(frame, factor=1.0):
    """What a scale of NEE changes: (99th percentile of uptake in sun above 500 W m-2,
    median night NEE at 8-12 degC air, the paired records' random error of fluxes below
    2 µmol m-2 s-1) [µmol m-2 s-1], NEE times ``factor``."""
    nee = frame["nee"].to_numpy(dtype=float) * factor
    if "nee_flag" in frame.columns:
        nee = np.where(frame["nee_flag"].to_numpy() != 0, np.nan, nee)
    rg = frame["rg"].to_numpy(dtype=float)
    tair = frame["tair"].to_numpy(dtype=float) if "tair" in frame.columns else np.full(
        len(nee), np.nan)
    with np.errstate(invalid="ignore"):
        sunny = rg > 500
        night = (rg < 5) & (tair >= 8) & (tair <= 12)
        uptake = float(np.nanpercentile(-nee[sunny], 99)) if np.isfinite(nee[sunny]).any() \
            else np.nan
        night10 = float(np.nanmedian(nee[night])) if np.isfinite(nee[night]).any() else np.nan
        step = int(round(pd.Timedelta(days=1) / (frame.index[1] - frame.index[0])))
        a, b = slice(None, -step), slice(step, None)
        pair = (np.abs(rg[a] - rg[b]) < 50) & (np.abs(tair[a] - tair[b]) < 3) & (
            np.abs(nee[a] + nee[b]) / 2 < 2)
        diff = (nee[a] - nee[b])[pair]
        diff = diff[np.isfinite(diff)]
        error = float(np.std(diff) / np.sqrt(2)) if len(diff) > 50 else np.nan
    return uptake, night10, error


def trial_frames(folders):
    from fluxpart.io import read_config
    seen = set()
    for folder in folders:
        for path in sorted(Path(folder).rglob("*.toml")):
            text = path.read_text(errors="replace") + str(sorted(
                f.stat().st_size for f in path.parent.iterdir() if f.is_file()))
            if "/out" in str(path) or text in seen:
                continue
            try:
                frame, _ = read_config(path)
            except Exception:  # noqa: BLE001 - a trial config this reader refuses
                continue
            if not {"nee", "rg"} <= set(frame.columns):
                continue
            seen.add(text)
            yield f"{path.parent.parent.name}/{path.name}", frame


def _scale(frame):
    return " ".join(f"{v:6.2f}" for v in scale_figures(frame)) + " | x2 " + " ".join(
        f"{v:6.2f}" for v in scale_figures(frame, 2.0))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", nargs="*", default=[])
    parser.add_argument("--skip-generated", action="store_true")
    parser.add_argument("--months", action="store_true",
                        help="also the rule on each calendar month alone")
    args = parser.parse_args(argv)
    from fluxpart.demo import site_year
    from fluxpart.io import read_config
    for toml, variant in (("quillmoor_grassland.toml", "c3"),
                          ("quillmoor_maize_logger.toml", "c4")):
        frame, _ = read_config(ROOT / "examples" / toml)
        _row("honest", toml, figures(frame))
        print(f"scale    {toml} {_scale(frame)}")
        field = site_year(7, variant="c4")[0]
        _row("july", f"{toml} July NEE of c4 seed 7", figures(frame, other_nee(frame, field, [7])))
        _row("mispair", f"{toml} weather of seed 5",
             figures(frame, weather=aligned(frame, site_year(5, variant=variant)[0])))
    if not args.skip_generated:
        frames = [(name, sy.frame) for name, sy in site_years()]
        for position, (name, frame) in enumerate(frames):
            others = [f for n, f in frames[position + 1:] + frames[:position]
                      if n.split()[0] == name.split()[0]
                      and f.index[1] - f.index[0] == frame.index[1] - frame.index[0]]
            _row("honest", name, figures(frame))
            print(f"scale    {name} {_scale(frame)}")
            if others:
                _row("mispair", f"{name} other's NEE", figures(frame, other_nee(frame, others[0])))
                _row("mispair", f"{name} other's weather",
                     figures(frame, weather=aligned(frame, others[0])))
                _row("july", f"{name} other's July NEE",
                     figures(frame, other_nee(frame, others[0], [7])))
    for name, frame in trial_frames(args.trials):
        _row("honest", f"trial {name}", figures(frame))
        print(f"scale    trial {name} {_scale(frame)}")
    for kind, rows in TALLY.items():
        called = [name for name, c in rows if c]
        print(f"{kind}: called {len(called)} of {len(rows)}"
              + (f" {called}" if kind == "honest" else ""))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
