"""Independent known-truth trial of the ``fluxpart`` command line (a benchmark script, not a test).

INVENTED DATA. Every site here is FICTIONAL (names, places, weather and fluxes are generated
by this script); no number computed from them describes a real ecosystem or supports any
carbon claim.

Unlike the project's own benchmarks, this script does not use ``fluxpart.scenarios``,
``fluxpart.demo`` or any other benchmark script to make data: it has its own weather model
and its own flux forms, writes logger-style CSV files with their own column names, units,
missing code and end-of-interval stamps, plus a site TOML, and then runs the command line as
a user would (``python -m fluxpart check`` / ``run``), reads ``annual.parquet`` and
``ustar.parquet`` and scores them against the truth.

Run from the repository root::

    python tests/benchmarks/trial_independent.py --out /tmp/fluxpart-trial

Models (textbook forms, each with its source; "(m)" = recalled from memory):

- sun: declination 23.45 sin(360 (284 + n) / 365) deg (Cooper 1969 (m)), equation of time
  (Spencer 1971 (m)), hour angle from local solar time, sin(elevation) = sin(phi) sin(delta) +
  cos(phi) cos(delta) cos(h); extraterrestrial 1361 W m-2 (Kopp & Lean 2011 (m)) x
  (1 + 0.033 cos(2 pi n / 365)); clear-sky beam transmittance 0.7^(m^0.678) (Meinel & Meinel
  1976 (m)) plus a diffuse share; clouds: a daily AR(1) latent variable mapped to a
  transmissivity 0.15-1, plus record-scale AR(1) flicker.
- air temperature: seasonal cosine + daily AR(1) synoptic anomaly + a diurnal cosine whose
  maximum lags solar noon by 2.5 h and whose amplitude grows with the day's transmissivity.
- soil temperature: air temperature passed through an exponential filter (time constant
  2 days: damped and lagged), kept near 0 degC under snow (insulation).
- humidity: dew point = daily minimum temperature minus a dryness offset; vapour pressure by
  the Tetens/Murray formula (Murray 1967 (m)); RH and VPD from it.
- leaf area: a smooth seasonal bell (or evergreen with a small cycle for the tropics).
- GPP: non-rectangular (theta > 0) or rectangular (theta = 0) light response of global
  radiation (Thornley & Johnson 1990 (m)), P_max scaled by leaf area, an exponential VPD
  limitation above 10 hPa (Lasslop et al. 2010 form (m)) and a cold limitation.
- Reco: Lloyd & Taylor (1994) with T_ref = 10 degC, T0 = -46.02 degC, of air or soil
  temperature, or a Q10 form; the reference rate is scaled mildly by leaf area (litter and
  root activity) so that no method sees a pure single-temperature response.
- u*: wind from a daily AR(1) log-normal speed with a diurnal cycle, u* = k U / ln(z/z0) and a
  night-time stability reduction; planted threshold: night records below it measure only a
  share 0.3 + 0.7 u*/thr of the true flux (lost to storage/advection).
- measurement: Laplace noise with sigma = 0.5 + 0.15 |NEE| (µmol m-2 s-1; Richardson et al.
  2006's form (m)); gaps linked to rain (cloudy days), winter icing runs, one multi-week
  outage, random dropouts and short runs; a few spikes.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

_ROOT = Path(__file__).resolve().parents[2]
PYTHON = sys.executable
UMOL_TO_GC = 12.011e-6  # g C per µmol CO2
T_REF_LT = 283.15
T0_LT = 227.13


@dataclasses.dataclass(frozen=True)
class SiteYear:
    key: str
    name: str
    lat: float
    lon: float
    utc: float
    year: int
    minutes: int
    canopy: str
    seed: int
    t_mean: float  # annual mean air temperature [degC]
    t_amp: float  # seasonal half-range [degC]
    warmest_doy: int
    pmax: float  # light-saturated GPP at full leaf area [µmol m-2 s-1]
    alpha: float  # initial slope [µmol J-1]
    theta: float  # curvature (0 = rectangular)
    vpd_k: float  # VPD limitation [hPa-1]
    lai_peak_doy: int
    lai_width: float  # days (sd of the seasonal bell); 0 = evergreen
    reco_form: str  # "lt" or "q10"
    reco_driver: str  # "tair" or "tsoil"
    rref: float  # µmol m-2 s-1 at 10 degC
    e0: float  # K (Lloyd-Taylor) ...
    q10: float  # ... or Q10
    ustar_thr: float  # planted [m s-1]
    z_over_z0: float
    dryness: float  # dew point depression scale [K]
    outage_days: int
    diurnal: float  # scale of the diurnal temperature range [1]
    syn_sd: float  # sd of the daily synoptic temperature anomaly [K]
    # file layout
    nee_unit: str  # "umol" or "mg"
    t_unit: str  # "C" or "K"
    humidity: str  # "vpd_hpa", "vpd_kpa", "rh_pct", "rh_frac"
    radiation: str  # "rg" or "ppfd"
    write_tsoil: bool


def _ar1(rng, n, phi, sd):
    e = rng.normal(0.0, sd * np.sqrt(1 - phi**2), n)
    x = np.empty(n)
    x[0] = rng.normal(0.0, sd)
    for i in range(1, n):
        x[i] = phi * x[i - 1] + e[i]
    return x


def _es(t):
    """Saturation vapour pressure [hPa] of temperature t [degC] (Murray 1967 (m))."""
    return 6.1078 * np.exp(17.27 * t / (t + 237.3))


def generate(s: SiteYear):
    """Return (frame of true and measured values, truth dict)."""
    rng = np.random.default_rng(s.seed)
    dt = s.minutes
    # end-of-interval stamps of one calendar year in local standard time
    end = pd.date_range(pd.Timestamp(s.year, 1, 1) + pd.Timedelta(minutes=dt),
                        pd.Timestamp(s.year + 1, 1, 1), freq=f"{dt}min")
    n = len(end)
    mid = end - pd.Timedelta(minutes=dt / 2)
    doy = mid.day_of_year.to_numpy()
    hour = (mid.hour + mid.minute / 60).to_numpy()
    day_index = (mid.normalize() - mid[0].normalize()).days.to_numpy()
    ndays = day_index.max() + 1
    rec_per_day = 1440 // dt

    # --- sun (Cooper 1969; Spencer 1971 (m)) ---
    gam = 2 * np.pi * (doy - 1) / 365.0
    decl = np.radians(23.45 * np.sin(2 * np.pi * (284 + doy) / 365.0))
    eot = 229.18 * (0.000075 + 0.001868 * np.cos(gam) - 0.032077 * np.sin(gam)
                    - 0.014615 * np.cos(2 * gam) - 0.040849 * np.sin(2 * gam))  # minutes
    solar_time = hour + (s.lon - 15.0 * s.utc) / 15.0 + eot / 60.0
    h = np.radians(15.0 * (solar_time - 12.0))
    phi = np.radians(s.lat)
    sin_el = np.sin(phi) * np.sin(decl) + np.cos(phi) * np.cos(decl) * np.cos(h)
    sin_el = np.clip(sin_el, 0.0, None)
    toa = 1361.0 * (1 + 0.033 * np.cos(2 * np.pi * doy / 365.0)) * sin_el
    airmass = np.where(sin_el > 0.01, 1.0 / np.maximum(sin_el, 0.01), 100.0)
    clear = toa * (0.7 ** (airmass**0.678) + 0.1)  # beam + diffuse share
    clear = np.minimum(clear, 0.85 * toa)

    # --- clouds: daily AR(1), record flicker ---
    cloud_day = _ar1(rng, ndays, 0.6, 1.0)
    trans_day = 0.15 + 0.85 / (1 + np.exp(-(1.0 - 1.3 * cloud_day)))
    flick = _ar1(rng, n, 0.8, 0.08 if dt == 30 else 0.06)
    trans = np.clip(trans_day[day_index] + flick, 0.1, 1.0)
    rg = clear * trans
    rainy_day = cloud_day > 0.9  # about 18 % of days

    # --- air temperature ---
    seas = s.t_mean + s.t_amp * np.cos(2 * np.pi * (doy - s.warmest_doy) / 365.0)
    syn = _ar1(rng, ndays, 0.75, s.syn_sd)[day_index]
    summer = 0.5 + 0.5 * np.cos(2 * np.pi * (doy - s.warmest_doy) / 365.0)
    damp = s.diurnal * (3.0 + 6.0 * trans_day[day_index] * summer)
    t_noon_solar = 12.0 - (s.lon - 15.0 * s.utc) / 15.0 - eot / 60.0  # clock hour of noon
    tair = seas + syn + damp * np.cos(2 * np.pi * (hour - (t_noon_solar + 2.5)) / 24.0)
    tair = tair + _ar1(rng, n, 0.9, 0.4)

    # --- soil temperature: exponential filter, snow insulation ---
    a = 1 - np.exp(-dt / (2 * 1440.0))
    tsoil = np.empty(n)
    tsoil[0] = seas[0]
    for i in range(1, n):
        tsoil[i] = tsoil[i - 1] + a * (tair[i] - tsoil[i - 1])
    tsoil = np.where(tsoil < 0, 0.25 * tsoil, tsoil) + 0.5

    # --- humidity ---
    tmin_day = pd.Series(tair).groupby(day_index).min().to_numpy()[day_index]
    dry = s.dryness * (0.5 + trans_day[day_index]) + np.abs(_ar1(rng, n, 0.95, 0.5))
    tdew = tmin_day - dry
    ea = _es(tdew)
    es = _es(tair)
    ea = np.minimum(ea, es)
    vpd = es - ea  # hPa
    rh = 100 * ea / es

    # --- leaf area (0..1) ---
    if s.lai_width > 0:
        dd = (doy - s.lai_peak_doy + 182.5) % 365 - 182.5
        lai = 0.08 + 0.92 * np.exp(-0.5 * (dd / s.lai_width) ** 4)
    else:
        lai = 0.85 + 0.15 * np.cos(2 * np.pi * (doy - s.lai_peak_doy) / 365.0)

    # --- GPP ---
    pmax = s.pmax * lai * np.exp(-s.vpd_k * np.clip(vpd - 10.0, 0, None))
    pmax = pmax * np.clip((tair + 2.0) / 8.0, 0, 1)  # cold limitation
    ai = s.alpha * rg
    if s.theta > 0:
        b = ai + pmax
        gpp = (b - np.sqrt(np.maximum(b * b - 4 * s.theta * ai * pmax, 0))) / (2 * s.theta)
    else:
        gpp = np.where(ai + pmax > 0, ai * pmax / np.maximum(ai + pmax, 1e-9), 0.0)
    gpp = np.where(rg > 0, gpp, 0.0)

    # --- Reco ---
    tdrv = tair if s.reco_driver == "tair" else tsoil
    rref = s.rref * (0.75 + 0.25 * lai)
    if s.reco_form == "lt":
        tk = np.maximum(tdrv + 273.15, T0_LT + 5)
        reco = rref * np.exp(s.e0 * (1 / (T_REF_LT - T0_LT) - 1 / (tk - T0_LT)))
    else:
        reco = rref * s.q10 ** ((tdrv - 10.0) / 10.0)
    nee = reco - gpp

    # --- wind and u* ---
    wind_day = np.exp(_ar1(rng, ndays, 0.5, 0.45))[day_index] * 3.0
    wind = wind_day * (1 + 0.35 * sin_el / 0.8) * np.exp(_ar1(rng, n, 0.7, 0.3))
    ustar = 0.41 * wind / np.log(s.z_over_z0)
    night = rg < 5
    ustar = np.where(night, ustar * 0.55, ustar)

    # --- measurement ---
    meas = nee.copy()
    low = night & (ustar < s.ustar_thr)
    meas[low] = nee[low] * (0.3 + 0.7 * ustar[low] / s.ustar_thr)
    sigma = 0.5 + 0.15 * np.abs(nee)
    meas = meas + rng.laplace(0.0, sigma / np.sqrt(2))

    miss = np.zeros(n, bool)
    # rain-linked daytime gaps (open-path sensor wet)
    miss |= rainy_day[day_index] & ~night & (rng.random(n) < 0.7)
    miss |= rainy_day[day_index] & night & (rng.random(n) < 0.3)
    # winter icing runs: days below -3 degC mean start 1-5 day runs
    tday = pd.Series(tair).groupby(day_index).mean().to_numpy()
    d = 0
    while d < ndays:
        if tday[d] < -3 and rng.random() < 0.15:
            length = int(rng.integers(1, 6))
            miss |= (day_index >= d) & (day_index < d + length)
            d += length
        d += 1
    # an outage
    if s.outage_days:
        start = int(rng.integers(30, ndays - s.outage_days - 30))
        miss |= (day_index >= start) & (day_index < start + s.outage_days)
    # random dropouts and short runs
    miss |= rng.random(n) < 0.14
    starts = np.flatnonzero(rng.random(n) < 0.01)
    for st in starts:
        miss[st:st + int(rng.integers(2, 4 * rec_per_day // 24 + 3))] = True
    # night-time calm-record loss by the operator (a sensor-heating schedule)
    miss |= night & (rng.random(n) < 0.2)
    meas[miss] = np.nan
    # spikes
    sp = rng.choice(np.flatnonzero(~miss), 12, replace=False)
    meas[sp] += rng.choice([-1, 1], 12) * rng.uniform(15, 30, 12)

    # driver gaps (short)
    drv_miss = np.zeros(n, bool)
    for st in rng.choice(n - 20, 6, replace=False):
        drv_miss[st:st + int(rng.integers(1, 12))] = True

    frame = pd.DataFrame({"end": end, "rg": rg, "tair": tair, "tsoil": tsoil, "vpd": vpd,
                          "rh": rh, "ustar": ustar, "nee_meas": meas, "drv_miss": drv_miss,
                          "trans": trans, "gpp_true": gpp, "reco_true": reco, "nee_true": nee,
                          "low_ustar": low})
    truth = {
        "nee": float(nee.sum() * dt * 60 * UMOL_TO_GC),
        "gpp": float(gpp.sum() * dt * 60 * UMOL_TO_GC),
        "reco": float(reco.sum() * dt * 60 * UMOL_TO_GC),
        "missing_share": float(np.isnan(meas).mean()),
        "low_ustar_night_share": float(low.sum() / max(night.sum(), 1)),
    }
    return frame, truth


def write_files(s: SiteYear, frame: pd.DataFrame, folder: Path) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    csv = folder / f"{s.key}.csv"
    out = pd.DataFrame()
    out["TS_END"] = frame["end"].dt.strftime("%Y-%m-%d %H:%M")
    nee = frame["nee_meas"].to_numpy()
    if s.nee_unit == "mg":
        out["FCO2_mg"] = nee * 44.01e-3
    else:
        out["FCO2"] = nee
    dm = frame["drv_miss"].to_numpy()
    if s.radiation == "ppfd":
        # PPFD per W m-2 of global radiation varies with the diffuse share (about 1.95-2.2)
        ratio = 1.95 + 0.25 * (1 - frame["trans"].to_numpy())
        out["PAR_in"] = np.where(dm, np.nan, frame["rg"] * ratio)
    else:
        out["glob_rad"] = np.where(dm, np.nan, frame["rg"])
    t = frame["tair"].to_numpy() + (273.15 if s.t_unit == "K" else 0.0)
    out["T_air"] = np.where(dm, np.nan, t)
    if s.write_tsoil:
        ts = frame["tsoil"].to_numpy() + (273.15 if s.t_unit == "K" else 0.0)
        out["T_soil10"] = ts
    hum = {"vpd_hpa": ("VPD_hpa", frame["vpd"]), "vpd_kpa": ("VPD_kpa", frame["vpd"] / 10),
           "rh_pct": ("RH", frame["rh"]), "rh_frac": ("RH_frac", frame["rh"] / 100)}
    col, val = hum[s.humidity]
    out[col] = np.where(dm, np.nan, val)
    out["u_fric"] = frame["ustar"]
    out = out.round(4)
    out.to_csv(csv, index=False, na_rep="-9999")

    cols = {"nee": "FCO2_mg" if s.nee_unit == "mg" else "FCO2",
            ("ppfd" if s.radiation == "ppfd" else "rg"): "PAR_in" if s.radiation == "ppfd"
            else "glob_rad",
            "tair": "T_air", "ustar": "u_fric"}
    if s.write_tsoil:
        cols["tsoil"] = "T_soil10"
    cols["vpd" if s.humidity.startswith("vpd") else "rh"] = col
    units = {}
    if s.nee_unit == "mg":
        units["nee"] = "mg CO2 m-2 s-1"
    if s.t_unit == "K":
        units["tair"] = "K"
        if s.write_tsoil:
            units["tsoil"] = "K"
    units.update({"vpd_kpa": {"vpd": "kPa"}, "rh_frac": {"rh": "fraction"}}.get(s.humidity, {}))
    lines = [
        f"# FICTIONAL site {s.name!r}: invented data from tests/benchmarks/trial_independent.py",
        "[site]", f'name = "{s.name} (fictional)"', f"latitude = {s.lat}",
        f"longitude = {s.lon}", f"utc_offset = {s.utc}", f'canopy = "{s.canopy}"', "",
        "[input]", f'path = "{csv.name}"', 'time_column = "TS_END"',
        'time_format = "%Y-%m-%d %H:%M"', 'time_marks = "end"', "missing = [-9999]", "",
        "[input.columns]"]
    lines += [f'{k} = "{v}"' for k, v in cols.items()]
    if units:
        lines += ["", "[input.units]"] + [f'{k} = "{v}"' for k, v in units.items()]
    lines += ["", "[processing]", "seed = 0", ""]
    toml = folder / f"{s.key}.toml"
    toml.write_text("\n".join(lines))
    return toml


def sites() -> list[SiteYear]:
    base = dict(canopy="tall", z_over_z0=20.0, outage_days=0, diurnal=1.0, syn_sd=2.5, nee_unit="umol", t_unit="C",
                humidity="vpd_hpa", radiation="rg", write_tsoil=True, theta=0.7, q10=2.0,
                e0=200.0, reco_form="lt", reco_driver="tair", lai_width=70.0)
    # 35 S eucalypt-like woodland, UTC+10
    s35 = dict(base, name="Tallowgum Flat", lat=-35.2, lon=148.1, utc=10.0, t_mean=13.0,
               t_amp=8.0, warmest_doy=20, pmax=22.0, alpha=0.045, vpd_k=0.04, lai_peak_doy=300,
               lai_width=0.0, rref=2.5, dryness=5.0)
    # 5 N tropical forest, UTC-4
    s05 = dict(base, name="Rio Verdal", lat=5.1, lon=-59.6, utc=-4.0, t_mean=24.5, t_amp=1.0,
               warmest_doy=270, pmax=42.0, alpha=0.05, vpd_k=0.02, diurnal=0.6, syn_sd=0.8, lai_peak_doy=150,
               lai_width=0.0, rref=4.5, dryness=2.0, e0=120.0)
    # 48 N mixed forest / crop, UTC+1
    s48 = dict(base, name="Kestrelmoos", lat=48.3, lon=11.6, utc=1.0, t_mean=8.5, t_amp=9.5,
               warmest_doy=200, pmax=28.0, alpha=0.04, vpd_k=0.035, lai_peak_doy=190,
               rref=2.0, dryness=3.0)
    # 68 N fen/birch, UTC+2
    s68 = dict(base, name="Aapajänkä Bog", lat=68.4, lon=27.3, utc=2.0, t_mean=-0.5, t_amp=13.0,
               warmest_doy=200, pmax=14.0, alpha=0.03, vpd_k=0.03, lai_peak_doy=200,
               lai_width=45.0, rref=1.2, dryness=2.0, canopy="short", z_over_z0=60.0)
    S = SiteYear
    return [
        S(key="s35_2019_lt_tair", year=2019, minutes=30, seed=11, ustar_thr=0.25, **s35),
        S(key="s35_2020_q10_tsoil_mg", year=2020, minutes=30, seed=12, ustar_thr=0.3,
          **dict(s35, reco_form="q10", reco_driver="tsoil", q10=2.2, nee_unit="mg")),
        S(key="s35_2021_hourly_rh", year=2021, minutes=60, seed=13, ustar_thr=0.2,
          **dict(s35, humidity="rh_pct", outage_days=21, e0=280.0)),
        S(key="s35_2022_rect_notsoil", year=2022, minutes=30, seed=14, ustar_thr=0.35,
          **dict(s35, theta=0.0, write_tsoil=False, pmax=35.0)),
        S(key="s05_2019_lt", year=2019, minutes=30, seed=21, ustar_thr=0.2, **s05),
        S(key="s05_2020_hourly_mg_rh", year=2020, minutes=60, seed=22, ustar_thr=0.3,
          **dict(s05, nee_unit="mg", humidity="rh_pct", outage_days=28)),
        S(key="s05_2021_q10_tsoil", year=2021, minutes=30, seed=23, ustar_thr=0.15,
          **dict(s05, reco_form="q10", reco_driver="tsoil", q10=1.8, rref=2.8)),
        S(key="s48_2019_lt_tsoil", year=2019, minutes=30, seed=31, ustar_thr=0.3,
          **dict(s48, reco_driver="tsoil", e0=250.0, rref=2.8)),
        S(key="s48_2020_K_kpa", year=2020, minutes=30, seed=32, ustar_thr=0.2,
          **dict(s48, t_unit="K", humidity="vpd_kpa", outage_days=18)),
        S(key="s48_2021_hourly_q10", year=2021, minutes=60, seed=33, ustar_thr=0.25,
          **dict(s48, reco_form="q10", q10=2.5, rref=2.5)),
        S(key="s48_2022_ppfd_rect", year=2022, minutes=30, seed=34, ustar_thr=0.15,
          **dict(s48, radiation="ppfd", theta=0.0, e0=150.0)),
        S(key="s48_2023_notsoil_tsoiltruth", year=2023, minutes=30, seed=35, ustar_thr=0.35,
          **dict(s48, reco_driver="tsoil", write_tsoil=False, rref=3.5)),
        S(key="s68_2019_lt_tsoil", year=2019, minutes=30, seed=41, ustar_thr=0.1,
          **dict(s68, reco_driver="tsoil", e0=300.0)),
        S(key="s68_2020_hourly_K_rhfrac", year=2020, minutes=60, seed=42, ustar_thr=0.15,
          **dict(s68, t_unit="K", humidity="rh_frac", outage_days=25)),
        S(key="s68_2021_q10_ppfd", year=2021, minutes=30, seed=43, ustar_thr=0.2,
          **dict(s68, reco_form="q10", q10=3.0, radiation="ppfd")),
        S(key="s68_2022_hourly_lt_tair", year=2022, minutes=60, seed=44, ustar_thr=0.12,
          **dict(s68, e0=180.0, rref=1.8, outage_days=14)),
    ]


def run_cli(args, cwd):
    env = dict(os.environ, PYTHONPATH=str(_ROOT))
    p = subprocess.run([PYTHON, "-m", "fluxpart", *args], cwd=cwd, env=env,
                       capture_output=True, text=True)
    return p.returncode, p.stdout, p.stderr


def score(s: SiteYear, truth: dict, outdir: Path) -> dict:
    a = pd.read_parquet(outdir / "annual.parquet").iloc[0]
    u = pd.read_parquet(outdir / "ustar.parquet")
    uy = u[u["period"] == "year"].iloc[0]
    row = {"key": s.key, "lat": s.lat, "min": s.minutes, "truth_form": s.reco_form + ":" +
           s.reco_driver, "missing": truth["missing_share"],
           "ustar_planted": s.ustar_thr, "ustar_found": float(uy["threshold_detected"]),
           "ustar_applied": float(a["ustar_threshold"]), "complete": bool(a["complete"]),
           "share_measured": float(a["share_measured"])}
    for col, tk in [("nee", "nee"), ("gpp_nighttime", "gpp"), ("reco_nighttime", "reco"),
                    ("gpp_daytime", "gpp"), ("reco_daytime", "reco")]:
        est, tv = float(a[col]), truth[tk]
        lo, hi = float(a[f"{col}_ci95_low"]), float(a[f"{col}_ci95_high"])
        row[f"{col}_true"] = tv
        row[f"{col}_est"] = est
        row[f"{col}_err"] = est - tv
        row[f"{col}_pct"] = 100 * (est - tv) / abs(tv) if tv else np.nan
        row[f"{col}_cov"] = bool(lo <= tv <= hi)
        row[f"{col}_halfwidth"] = (hi - lo) / 2
    return row


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=Path("/tmp/fluxpart-trial"))
    ap.add_argument("--only", nargs="*", default=None)
    ns = ap.parse_args(argv)
    rows, logs = [], {}
    for s in sites():
        if ns.only and s.key not in ns.only:
            continue
        frame, truth = generate(s)
        toml = write_files(s, frame, ns.out / "input")
        rc_c, out_c, err_c = run_cli(["check", str(toml)], ns.out)
        t0 = time.perf_counter()
        rc, out, err = run_cli(["run", str(toml), "--out", str(ns.out / "result" / s.key)],
                               ns.out)
        secs = time.perf_counter() - t0
        logs[s.key] = {"check_rc": rc_c, "check": out_c + err_c, "run_rc": rc, "run": out + err}
        if rc != 0:
            print(f"{s.key}: run exit {rc}: {(out + err).strip().splitlines()[-1:]}")
            rows.append({"key": s.key, "run_rc": rc})
            continue
        row = score(s, truth, ns.out / "result" / s.key)
        row.update(run_rc=rc, check_rc=rc_c, seconds=round(secs, 1))
        rows.append(row)
        print(f"{s.key}: nee {row['nee_err']:+.0f} ({row['nee_pct']:+.0f} %) "
              f"gppN {row['gpp_nighttime_pct']:+.1f} % recoN {row['reco_nighttime_pct']:+.1f} % "
              f"gppD {row['gpp_daytime_pct']:+.1f} % recoD {row['reco_daytime_pct']:+.1f} % "
              f"u* {row['ustar_found']:.3f}/{s.ustar_thr} miss {row['missing']:.2f} "
              f"check {rc_c} {secs:.1f}s", flush=True)
    table = pd.DataFrame(rows)
    table.to_csv(ns.out / "scores.csv", index=False)
    (ns.out / "logs.json").write_text(json.dumps(logs, indent=1))
    ok = table[table["run_rc"] == 0]
    for col in ["nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"]:
        if f"{col}_cov" in ok:
            print(f"{col:15s} coverage {ok[f'{col}_cov'].mean() * 100:5.1f} % "
                  f"({ok[f'{col}_cov'].sum()}/{len(ok)}), median error "
                  f"{ok[f'{col}_err'].median():+.1f} g C m-2, median |%| "
                  f"{ok[f'{col}_pct'].abs().median():.1f}")


if __name__ == "__main__":
    main()
