"""Probe: the deep-soil-probe warning (:mod:`fluxpart.soil_depth`) on generated soils that
are damped for real (round review97).

INVENTED DATA: every record here is generated; no number describes a real site.

Air temperature: a seasonal course, day-to-day weather (an AR(1) of the daily mean) and a
daily wave whose range varies with cloud (2-16 K). The soil surface follows the air's
daily mean and keeps a fraction ``f`` of its daily swing (a canopy's shade, a water
layer). Below the surface, each Fourier component of period P is damped and delayed by
heat conduction as exp(-(1 + i) z / d), d = sqrt(P kappa / pi) the damping depth of that
period in a layer of diffusivity kappa (Campbell & Norman 1998, eq. 8.6 (m)); a probe
under layers of different kappa takes the sum of z_k / d_k (the layers' reflections
neglected). Diffusivities [m2 s-1] (Campbell & Norman 1998, ch. 8; Hillel 1998, ch. 12;
Oke 1987, table 2.1 (all m)): moist mineral soil 0.5-0.8e-6, dry litter and moss
0.1-0.15e-6, saturated peat 0.12e-6, wet clay 0.5e-6.

    OMP_NUM_THREADS=1 PYTHONPATH=$PWD python tests/benchmarks/probe_soil_depth97.py

Prints, per case and record interval, the ratio the check computes
(:func:`fluxpart.soil_depth.daily_range_ratio`) over three seeds, and whether it is named.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from fluxpart.soil_depth import DEEP_RATIO, daily_range_ratio, deep_soil_probe

DAY = 86400.0
MINERAL, LITTER, PEAT, CLAY = 0.6e-6, 0.12e-6, 0.12e-6, 0.5e-6

#: name -> (surface fraction f of the air's daily swing, [(layer depth m, kappa)],
#: seasonal mean offset K, snow until day-of-year or None)
CASES = {
    "open grass, 5 cm": (1.0, [(0.05, MINERAL)], 0.0, None),
    "open grass, 2 cm": (1.0, [(0.02, MINERAL)], 0.0, None),
    "temperate forest, 5 cm under 3 cm litter": (0.4, [(0.03, LITTER), (0.05, MINERAL)], -1.0, None),
    "dense forest (f 0.25), 5 cm under 5 cm litter": (0.25, [(0.05, LITTER), (0.05, MINERAL)], -1.0, None),
    "boreal, 5 cm in feather moss": (0.5, [(0.05, LITTER)], -2.0, 130),
    "boreal, 5 cm under 10 cm moss": (0.5, [(0.10, LITTER), (0.05, MINERAL)], -3.0, 130),
    "wet peat, 5 cm": (0.5, [(0.05, PEAT)], -1.0, None),
    "wet peat, 10 cm": (0.5, [(0.10, PEAT)], -1.0, None),
    "rice paddy, 5 cm under the flood": (0.4, [(0.05, CLAY)], 2.0, None),
    "tropical closed canopy (f 0.3), 5 cm under 3 cm litter": (0.3, [(0.03, LITTER), (0.05, MINERAL)], 0.0, None),
    "tropical closed canopy (f 0.2), 5 cm under 5 cm litter": (0.2, [(0.05, LITTER), (0.05, MINERAL)], 0.0, None),
    "after a long snow cover, 5 cm": (0.8, [(0.05, MINERAL)], 0.0, 150),
    "50 cm mineral (the mistake)": (1.0, [(0.50, MINERAL)], 0.0, None),
    "35 cm mineral": (1.0, [(0.35, MINERAL)], 0.0, None),
}


def air_series(seed: int, minutes: int, tropical: bool):
    """A year of air temperature [degC] at `minutes` resolution and its stamps."""
    rng = np.random.default_rng(seed)
    stamps = pd.date_range("2022-01-01", periods=int(365 * 1440 / minutes), freq=f"{minutes}min")
    t = np.arange(len(stamps)) * minutes * 60.0
    doy = t / DAY
    season = (25.0 + 1.0 * np.sin(2 * np.pi * (doy - 100) / 365) if tropical
              else 9.0 + 11.0 * np.sin(2 * np.pi * (doy - 110) / 365))
    days = int(np.ceil(doy[-1])) + 2
    weather = np.zeros(days)
    for k in range(1, days):
        weather[k] = 0.75 * weather[k - 1] + rng.normal(0.0, 1.2 if tropical else 2.0)
    daily_mean = np.interp(doy, np.arange(days), weather)
    amplitude = np.interp(doy, np.arange(days) + 0.5, rng.uniform(1.0, 8.0, days))
    wave = amplitude * np.sin(2 * np.pi * (doy % 1.0 - 0.375))
    return stamps, t, season + daily_mean, wave


def conducted(surface, t, layers):
    """The surface series damped and delayed at the probe's depth, period by period."""
    n = len(surface)
    mean = surface.mean()
    spectrum = np.fft.rfft(surface - mean)
    omega = 2 * np.pi * np.fft.rfftfreq(n, d=t[1] - t[0])
    depth_over_d = np.zeros_like(omega)
    for depth, kappa in layers:
        d = np.sqrt(2 * kappa / np.where(omega > 0, omega, np.inf))
        depth_over_d += np.where(omega > 0, depth / np.where(d > 0, d, np.inf), 0.0)
    spectrum *= np.exp(-(1 + 1j) * depth_over_d)
    return mean + np.fft.irfft(spectrum, n)


def case_series(name, seed, minutes):
    f, layers, offset, snow_until = CASES[name]
    tropical = name.startswith("tropical")
    stamps, t, slow, wave = air_series(seed, minutes, tropical)
    air = slow + wave
    surface = slow + offset + f * wave
    if snow_until is not None:
        doy = t / DAY
        under = (doy < snow_until) | (doy > 320)
        surface = np.where(under, np.minimum(surface, 0.0) * 0.1, surface)
    soil = conducted(surface, t, layers)
    rng = np.random.default_rng(seed + 1000)
    soil = np.round(soil + rng.normal(0, 0.01, len(soil)), 2)    # a 0.01 K probe
    return stamps, np.round(air, 2), soil


def main():
    print(f"bound DEEP_RATIO = {DEEP_RATIO}")
    for name in CASES:
        for minutes in (10, 30, 60):
            ratios, named = [], 0
            for seed in range(3):
                stamps, air, soil = case_series(name, seed, minutes)
                found = daily_range_ratio(air, soil, stamps)
                ratios.append(np.nan if found is None else found[0])
                named += deep_soil_probe(air, soil, stamps) is not None
            print(f"{name:58s} {minutes:3d} min  ratio {np.nanmin(ratios):.3f}-"
                  f"{np.nanmax(ratios):.3f}  named {named}/3")
    # a soil column of daily means (each day's mean written on its every record)
    stamps, air, soil = case_series("open grass, 5 cm", 0, 30)
    daily = pd.Series(soil, index=stamps).groupby(stamps.normalize()).transform("mean")
    print("daily means:", deep_soil_probe(air, daily.to_numpy(), stamps))
    hourly = pd.Series(soil, index=stamps).groupby(stamps.normalize()).transform("mean")
    smooth = hourly.rolling(48, center=True, min_periods=1).mean()
    print("daily means interpolated:", deep_soil_probe(air, smooth.to_numpy(), stamps))


if __name__ == "__main__":
    main()
