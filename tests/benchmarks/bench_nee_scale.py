"""Does the daytime light response give NEE an absolute scale? (round mistakes36)

NEE read several times too large (g CO2 m-2 d-1 declared or left as µmol m-2 s-1 is
×3.79; a logger's gain doubled from July is ×2) scales every flux and every fitted
parameter alike, so the only physics that could name it is an absolute bound. The
candidate is the initial slope alpha of the rectangular hyperbola that the daytime
method fits per window (:func:`fluxpart.partition.daytime.partition_daytime`,
µmol CO2 per J of Rg):

- the photochemical maximum is 8–10 photons per CO2 fixed, 0.10–0.125 mol CO2 per mol
  of absorbed photons (Farquhar, von Caemmerer & Berry 1980; Ehleringer & Björkman
  1977 (m)); with Rg → PPFD about 2.0–2.1 µmol J-1 (common practice) that is 0.20–0.26
  µmol J-1 of Rg, and the fit's own ceiling (Lasslop et al. 2010 (m)) is 0.22;
- ecosystem values are 0.01–0.08 mol per mol of incident photons (common practice),
  0.02–0.17 µmol J-1 of Rg.

For each generated site-year (``fluxpart.scenarios.generate``, every archetype) and
each factor (1, 2, 3.8, and 2 from July) the script fits the daytime windows on the
flag-accepted NEE (no u* filter: alpha is a daytime quantity) and prints the share of
accepted windows at the ceiling and the median and 90th percentile of alpha over the
well-determined windows (standard error below a quarter of alpha, beta0 above 5 µmol
m-2 s-1, below the ceiling); then, per threshold, how many ×1 site-years a rule
"median alpha above the threshold" would name (false alarms) and how many ×2 / ×3.8
site-years it would name (power). Not collected by pytest; prints figures and asserts
nothing. Usage::

    OMP_NUM_THREADS=1 PYTHONPATH=. .venv/bin/python tests/benchmarks/bench_nee_scale.py --sites 70
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart import scenarios
from fluxpart.partition.daytime import partition_daytime
from fluxpart.pipeline import process_site_config

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"

#: The fit's ceiling of alpha [µmol J-1] (partition_daytime's default alpha_bounds).
CEILING = 0.22
#: Rg below which a record counts as night for this measurement [W m-2] (common practice).
NIGHT_RG = 10.0
FACTORS = ("x1", "x2", "x3.8", "x2 from July")


def window_alphas(frame, factor):
    """Alpha of the accepted daytime windows of `frame` with NEE times `factor`.

    Returns
    -------
    tuple of (float, numpy.ndarray)
        The share of accepted windows at the ceiling [1] and alpha of the
        well-determined windows [µmol J-1].
    """
    nee = frame["nee"].to_numpy(dtype=float).copy()
    if "nee_flag" in frame:
        nee[frame["nee_flag"].to_numpy() != 0] = np.nan
    filled = {name: frame[name].interpolate(limit_direction="both").to_numpy()
              for name in ("rg", "vpd", "tair")}
    result = partition_daytime(frame.index, nee * factor, filled["rg"], filled["vpd"],
                               filled["tair"], filled["rg"] < NIGHT_RG, e0_fallback=150.0)
    windows = result.parameters[result.parameters["accepted"]]
    alpha = windows["alpha"]
    at_ceiling = float((alpha >= CEILING - 1e-4).mean())
    good = (windows["alpha_se"] < 0.25 * alpha) & (windows["beta0"] > 5.0) \
        & (alpha < CEILING - 1e-4)
    return at_ceiling, alpha[good].to_numpy()


def run_alphas(result):
    """Ceiling share, median and 90th percentile of alpha of a run's daytime windows."""
    windows = result.parameters["daytime"]
    windows = windows[windows["accepted"]]
    alpha = windows["alpha"]
    good = alpha[(windows["alpha_se"] < 0.25 * alpha) & (windows["beta0"] > 5.0)
                 & (alpha < CEILING - 1e-4)]
    return (float((alpha >= CEILING - 1e-4).mean()), float(good.median()),
            float(good.quantile(0.9)))


def examples() -> None:
    """The same figures from whole runs of both examples, the grassland's NEE scaled."""
    frame = pd.read_csv(EXAMPLES / "quillmoor_grassland.csv", dtype=str)
    values = pd.to_numeric(frame["co2_exchange"])
    stamps = pd.to_datetime(frame["stamp_end"], format="%Y%m%d%H%M")
    july = np.where(stamps >= "2021-07-01", 2.0, 1.0)
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        shutil.copy(EXAMPLES / "quillmoor_grassland.toml", folder)
        for name, factor in zip(FACTORS, (1.0, 2.0, 3.8, july), strict=True):
            scaled = np.where(values == -9999, values, values * factor)
            frame.assign(co2_exchange=[f"{v:.4f}" if v != -9999 else "-9999"
                                       for v in scaled]).to_csv(
                folder / "quillmoor_grassland.csv", index=False)
            result = process_site_config(folder / "quillmoor_grassland.toml")
            annual = result.annual.iloc[0]
            print(f"grassland {name:13s} ceiling {{:.2f}} median {{:.3f}} q90 {{:.3f}}".format(
                *run_alphas(result)), f"NEE {annual['nee']:.1f} nighttime GPP "
                f"{annual['gpp_nighttime']:.1f} Reco {annual['reco_nighttime']:.1f} g C m-2")
    result = process_site_config(EXAMPLES / "quillmoor_maize_logger.toml")
    print("maize logger x1           ceiling {:.2f} median {:.3f} q90 {:.3f}".format(
        *run_alphas(result)))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=70, help="generated site-years (seeds 0..N-1)")
    parser.add_argument("--examples", action="store_true",
                        help="also whole runs of both examples (grassland NEE scaled)")
    args = parser.parse_args(argv)
    warnings.simplefilter("ignore")
    if args.examples:
        examples()
    medians = {name: [] for name in FACTORS}
    print("seed archetype      " + "  ".join(f"{n:>22}" for n in FACTORS))
    print(" " * 20 + "  ".join(f"{'ceiling med q90':>22}" for _ in FACTORS))
    for seed in range(args.sites):
        site_year = scenarios.generate(seed)
        frame = site_year.frame
        july = np.where(frame.index.month >= 7, 2.0, 1.0)
        cells = []
        for name, factor in zip(FACTORS, (1.0, 2.0, 3.8, july), strict=True):
            at_ceiling, alpha = window_alphas(frame, factor)
            median = float(np.median(alpha)) if alpha.size else np.nan
            q90 = float(np.quantile(alpha, 0.9)) if alpha.size else np.nan
            medians[name].append(median)
            cells.append(f"{at_ceiling:6.2f} {median:6.3f} {q90:6.3f}  ")
        print(f"{seed:4d} {site_year.scenario.archetype:14s} " + "  ".join(cells), flush=True)
    print("\nrule: median alpha of the well-determined windows above a threshold [µmol J-1]")
    base = np.array(medians["x1"])
    for threshold in (0.06, 0.08, 0.10, 0.13, 0.17, 0.20):
        power = "  ".join(f"{name} {int((np.array(medians[name]) > threshold).sum())}"
                          for name in FACTORS[1:])
        print(f"  {threshold:.2f}: false alarms {int((base > threshold).sum())} of "
              f"{base.size}; named {power}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
