"""Other-physics benchmark: known-truth site-years whose fluxes follow other functional forms.

Not collected by pytest (no ``test_`` prefix); prints figures and asserts nothing. The two
other known-truth benchmarks (``bench_calibration.py``, ``bench_generalisation.py``)
simulate respiration with the Lloyd–Taylor equation that the nighttime method fits, GPP
with a hyperbola of Rg and Laplace errors independent between records, so a method can
look good because the data speak its own language. Here the same invented places and
weather (:mod:`fluxpart.scenarios`) meet other forms of the same physiology:

- respiration: the Q10 form R = R10 Q10^((T - 10 °C) / 10), Q10 drawn in 1.5–2.8 around
  the doubling per 10 °C of enzyme-driven rates (common practice), on air or soil
  temperature, R10 following the canopy capacity (and soil moisture at dry sites);
- GPP: a non-rectangular hyperbola of Rg (curvature 0.5–0.95) whose light-saturated rate
  follows a temperature optimum (Gaussian, optimum 16–26 °C, width 9–14 K) and falls
  linearly above 10 hPa VPD (1.5–4 % per hPa, to no less than 30 %); at C4 crop sites the
  saturated rate is raised threefold, so light saturation is slight (common practice: C4
  canopies show little light saturation);
- errors: Gaussian, standard deviation growing linearly with |NEE| (form of Richardson
  et al. 2006), with a lag-1 correlation of 0–0.4 between consecutive records;
- u* loss: below the threshold a share measured of (u*/u*_t)^p with p in 0.5–3;
- gaps: daytime rejection more frequent in cloudy (wet) hours, whole nights lost, and
  outages in half of which the weather station keeps recording.

Defaults of :func:`fluxpart.process`; nothing here was used to choose a rule. Per
site-year it prints the annual errors, whether each stated 95 % interval holds the
truth, and the u* threshold found against the one planted.

Usage (about 2–3 s per site-year; one process per core at most)::

    .venv/bin/python tests/benchmarks/bench_other_physics.py --start 0 --sites 28 --csv a.csv

References
----------
Richardson, A. D. et al. (2006). Agricultural and Forest Meteorology 136, 1–18.
Thornley, J. H. M. & Johnson, I. R. (1990). Plant and Crop Modelling. Clarendon, Oxford.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from bench_generalisation import report, scored  # noqa: E402  (this folder)

from fluxpart import scenarios  # noqa: E402
from fluxpart.demo import _mark  # noqa: E402
from fluxpart.responses import non_rectangular_hyperbola  # noqa: E402


def _physics(rng, archetype: str) -> dict:
    """Draw the other-physics parameters of one site-year."""
    return {"q10": rng.uniform(1.5, 2.8), "r10_scale": rng.uniform(0.8, 1.2),
            "curvature": rng.uniform(0.5, 0.95), "t_optimum": rng.uniform(16.0, 26.0),
            "t_width": rng.uniform(9.0, 14.0), "vpd_slope": rng.uniform(0.015, 0.04),
            "c4_boost": 3.0 if archetype == "c4_crop" else 1.0,
            "noise_rho": rng.uniform(0.0, 0.4), "ustar_exponent": rng.uniform(0.5, 3.0),
            "cloudy_rejection": rng.uniform(0.15, 0.35), "lost_nights": rng.uniform(0.03, 0.1),
            "station_up": rng.random(4) < 0.5}


def _fluxes(weather, capacity, p, q):
    """True GPP and Reco [µmol m-2 s-1] under the other physics."""
    rg = np.clip(weather["rg_true"].to_numpy(), 0.0, None)
    tair = weather["tair"].to_numpy()
    vpd = weather["vpd"].to_numpy()
    saturated = (p["beta0"] * q["c4_boost"]
                 * np.exp(-0.5 * ((tair - q["t_optimum"]) / q["t_width"]) ** 2)
                 * np.clip(1.0 - q["vpd_slope"] * (vpd - 10.0), 0.3, 1.0))
    gpp = capacity * non_rectangular_hyperbola(rg, p["alpha"], saturated, q["curvature"])
    moisture = weather["moisture"].to_numpy() if p["phenology"] == "wet_season" else 1.0
    r10 = (q["r10_scale"] * p["rref"] * (1.0 + p["rref_phenology"] * (capacity - 0.5))
           * (0.3 + 0.7 * moisture))
    reco = r10 * q["q10"] ** ((weather[p["driver"]].to_numpy() - 10.0) / 10.0)
    return gpp, reco


def _measure(rng, weather, gpp, reco, step, p, q):
    """The tower's view: u* loss, correlated Gaussian errors, weather-linked gaps."""
    n = len(weather)
    per_hour, per_day = 60 // step, 1440 // step
    nee_true = reco - gpp
    night = weather["rg_true"].to_numpy() < scenarios._NIGHT_RG
    ustar = weather["ustar"].to_numpy()
    threshold = p["ustar_threshold"]
    share = np.where(night & (ustar < threshold), (ustar / threshold) ** q["ustar_exponent"],
                     1.0)
    rho = q["noise_rho"]
    innovations = rng.standard_normal(n) * np.sqrt(1.0 - rho * rho)
    innovations[0] /= np.sqrt(1.0 - rho * rho)       # stationary start
    noise = lfilter([1.0], [1.0, -rho], innovations)  # AR(1) of unit variance
    sd = p["error_intercept"] + p["error_slope"] * np.abs(nee_true)
    nee = nee_true * share + sd * noise
    frame = pd.DataFrame({"nee": nee, "rg": weather["rg"].to_numpy(),
                          "tair": weather["tair"].to_numpy(), "vpd": weather["vpd"].to_numpy(),
                          "ustar": ustar, "tsoil": weather["tsoil"].to_numpy(),
                          "rh": weather["rh"].to_numpy()}, index=weather.index)
    cloudy = ~night & (weather["rh"].to_numpy() > 85.0)
    rejected = rng.random(n) < np.where(night, p["night_rejection"],
                                        np.where(cloudy, p["day_rejection"]
                                                 + q["cloudy_rejection"], p["day_rejection"]))
    day_number = np.arange(n) // per_day
    lost_night = night & (rng.random(day_number[-1] + 1) < q["lost_nights"])[day_number]
    low_days, high_days = p["long_gap_days"]
    starts = rng.integers(10 * per_day, n - 25 * per_day, size=p["long_gaps"])
    lengths = rng.integers(low_days * per_day, high_days * per_day + 1, size=starts.size)
    up = q["station_up"][: starts.size]
    tower_down = _mark(n, starts, lengths)
    station_down = _mark(n, starts[~up], lengths[~up])
    short_starts = np.flatnonzero(rng.random(n) < 2.0 / per_day / 7.0)
    short = _mark(n, short_starts, rng.integers(1, 6 * per_hour + 1, short_starts.size))
    missing = {"nee": tower_down | short | rejected | lost_night,
               "ustar": tower_down}
    missing.update({name: station_down for name in ("rg", "tair", "rh", "vpd", "tsoil")})
    return frame.assign(**{name: np.where(mask, np.nan, frame[name].to_numpy())
                           for name, mask in missing.items()})


def physics_of(seed: int) -> dict:
    """The other-physics parameters drawn for `seed` (those :func:`generate` uses)."""
    scenario = scenarios.draw(seed)
    physics_rng = np.random.default_rng(
        np.random.SeedSequence([scenario.seed, 104729, 31]).spawn(3)[2])
    return _physics(physics_rng, scenario.archetype)


def generate(seed: int, replaced: dict | None = None) -> scenarios.SiteYear:
    """The other-physics site-year of `seed`: place and weather of ``scenarios.draw(seed)``;
    `replaced` overrides other-physics parameters after their draw (the same random numbers
    otherwise; ``bench_miss_causes.py oth:SEED``)."""
    scenario = scenarios.draw(seed)
    p = scenario.parameters
    weather_rng, measure_rng, physics_rng = (
        np.random.default_rng(child)
        for child in np.random.SeedSequence([scenario.seed, 104729, 31]).spawn(3))
    q = {**_physics(physics_rng, scenario.archetype), **(replaced or {})}
    index = pd.date_range(f"{scenario.year}-01-01", f"{scenario.year + 1}-01-01",
                          freq="30min", inclusive="left", name="time")
    weather = scenarios._weather(weather_rng, index, scenario.site, p, 30)
    capacity = scenarios._capacity(index, weather, scenario.site, p, 30)
    gpp, reco = _fluxes(weather, capacity, p, q)
    weather, gpp, reco = scenarios._coarsen(weather, gpp, reco, scenario.interval_minutes)
    frame = _measure(measure_rng, weather, gpp, reco, scenario.interval_minutes, p, q)
    return scenarios._with_truth(scenario, frame, gpp, reco)


def run_one(seed: int) -> dict:
    """Process one site-year; return its errors, coverage and u* thresholds."""
    site_year = generate(seed)
    scenario = site_year.scenario
    return scored(site_year, {
        "seed": seed, "archetype": scenario.archetype, "interval": scenario.interval_minutes,
        "driver": scenario.parameters["driver"],
        "ustar_planted": scenario.parameters["ustar_threshold"]})


def main() -> None:
    report(run_one, "archetype", __doc__.splitlines()[0])


if __name__ == "__main__":
    main()
