"""Invented Rg records with known clock truth, built on pvlib (not on fluxpart.solar).

Used by tests/test_clock.py, tests/test_preflight.py and the clock benchmark. The sun
comes from pvlib (version 0.16.1 when written): ``pvlib.solarposition.get_solarposition``
(NREL SPA, Reda & Andreas 2004, Solar Energy 76:577-589) and the clear-sky global
irradiance of ``pvlib.clearsky.haurwitz`` (Haurwitz 1945). A tilted sensor gets the
plane-of-array irradiance of ``pvlib.irradiance.get_total_irradiance`` after the
``pvlib.irradiance.erbs`` split into direct and diffuse (Erbs et al. 1982). Clouds are
invented: a day-to-day AR(1) clearness with changes within the day.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

pvlib = pytest.importorskip("pvlib")

CLOUDINESS = {"clear": 0.9, "moderate": 0.65, "cloudy": 0.4}


def _clearness(rng, n_days, samples_per_day, mean):
    """Daily AR(1) clearness around `mean` plus hourly-scale changes, within [0.05, 1.05]."""
    daily = np.empty(n_days)
    state = 0.0
    for i in range(n_days):
        state = 0.7 * state + np.sqrt(1 - 0.49) * rng.standard_normal()
        daily[i] = state
    day = np.clip(mean + 0.25 * daily, 0.05, 1.05)
    within = np.repeat(rng.standard_normal(n_days * 24), samples_per_day // 24)
    return np.clip(np.repeat(day, samples_per_day) + 0.10 * within, 0.05, 1.05)


def synthetic_rg(latitude, longitude, utc_offset, *, year=2021, days=365, interval_minutes=30,
                 seed=0, cloudiness="moderate", tilt_degrees=0.0, tilt_azimuth=90.0,
                 shade_azimuths=None, clock_shift_minutes=0.0, daylight_saving=None,
                 start_month=1, afternoon_showers=0.0, wet_summer=0.0, shade_elevation=20.0,
                 summer_morning_fog=0.0):
    """A regular record of measured Rg [W m-2] at interval starts, local standard time.

    Parameters
    ----------
    clock_shift_minutes : float
        The logger's stamps run this many minutes late: the value at stamp t was
        measured over [t - shift, t - shift + interval). Positive = Rg appears later.
    daylight_saving : tuple of (month, month), optional
        Stamps in civil time with daylight saving (one hour later) from the first day
        of the first month to the first day of the second month (across the new year
        where the first is later, as in the southern hemisphere).
    tilt_degrees, tilt_azimuth : float
        A sensor tilted toward this azimuth (degrees east of north).
    wet_summer : float
        Clearness lowered by this share in the local summer (a monsoon: clouds that
        follow the sun's season, so the clear-day Rg no longer follows it).
    afternoon_showers : float
        Share of days whose afternoons (13-19 h) are darkened by convective cloud.
    shade_azimuths : tuple of (low, high), optional
        The direct beam is blocked while the sun stands in this azimuth range below
        `shade_elevation` degrees (a tree line or a building); `shade_elevation` may be a
        function of the days elapsed since the record's start (a tree growing).
    summer_morning_fog : float
        Share of local-summer days (as for `wet_summer`) whose mornings stay foggy
        (clearness x 0.3) until a time drawn between 9 and 12 h (coastal fog).
    """
    rng = np.random.default_rng(seed)
    fine_minutes = 10 if interval_minutes >= 30 else 5
    start = pd.Timestamp(year, start_month, 1)
    pad = pd.Timedelta(days=1)
    local = pd.date_range(start - pad, start + pd.Timedelta(days=days) + pad,
                          freq=f"{fine_minutes}min", inclusive="left")
    zone = dt.timezone(dt.timedelta(hours=utc_offset))
    middle = (local + pd.Timedelta(minutes=fine_minutes / 2)).tz_localize(zone)
    sun = pvlib.solarposition.get_solarposition(middle, latitude, longitude)
    ghi = pvlib.clearsky.haurwitz(sun["apparent_zenith"])["ghi"].to_numpy()
    if tilt_degrees or shade_azimuths:
        split = pvlib.irradiance.erbs(ghi, sun["zenith"].to_numpy(), middle)
        dni, dhi = split["dni"].to_numpy(), split["dhi"].to_numpy()
        if shade_azimuths:
            low, high = shade_azimuths
            if callable(shade_elevation):   # an obstruction growing: degrees at elapsed days
                shade_elevation = shade_elevation(np.asarray((local - start) / pd.Timedelta(days=1)))
            blocked = ((sun["azimuth"].to_numpy() >= low) & (sun["azimuth"].to_numpy() <= high)
                       & (sun["elevation"].to_numpy() < shade_elevation))
            dni = np.where(blocked, 0.0, dni)
        total = pvlib.irradiance.get_total_irradiance(
            tilt_degrees, tilt_azimuth, sun["apparent_zenith"].to_numpy(),
            sun["azimuth"].to_numpy(), dni, ghi, dhi)
        ghi = np.nan_to_num(np.asarray(total["poa_global"], dtype=float))
    samples_per_day = 1440 // fine_minutes
    n_days = len(local) // samples_per_day
    clearness = _clearness(rng, n_days, samples_per_day, CLOUDINESS[cloudiness])
    summer_month = local.month.isin([5, 6, 7, 8, 9] if latitude >= 0 else [11, 12, 1, 2, 3])
    clearness = clearness * np.where(summer_month, 1.0 - wet_summer, 1.0)
    hour = (local.hour + local.minute / 60.0).to_numpy()
    showers = np.repeat(rng.random(n_days) < afternoon_showers, samples_per_day)
    clearness = np.where(showers & (hour >= 13) & (hour < 19), 0.4 * clearness, clearness)
    fog_rng = np.random.default_rng([seed, 1])     # its own stream: other records unchanged
    foggy = np.repeat(fog_rng.random(n_days) < summer_morning_fog, samples_per_day) & summer_month
    clears = np.repeat(9.0 + 3.0 * fog_rng.random(n_days), samples_per_day)
    clearness = np.where(foggy & (hour < clears), 0.3 * clearness, clearness)
    rg_fine = pd.Series(ghi * clearness, index=local)
    rg = rg_fine.resample(f"{interval_minutes}min", label="left", closed="left").mean()
    records_per_day = 1440 // interval_minutes
    shift_records = clock_shift_minutes / interval_minutes
    values = rg.to_numpy()
    positions = np.arange(len(values)) - shift_records
    shifted = np.interp(positions, np.arange(len(values)), values)
    rg = pd.Series(shifted, index=rg.index)
    if daylight_saving is not None:
        first, last = daylight_saving
        stamps = rg.index
        after, before = stamps.month >= first, stamps.month < last
        summer = (after & before) if first < last else (after | before)   # southern: Oct-Apr
        hour = 60 // interval_minutes
        rg = rg.where(~summer, rg.shift(hour))
    rg = rg[(rg.index >= start) & (rg.index < start + pd.Timedelta(days=days))]
    noise = 1.0 * rng.standard_normal(len(rg)) + 0.02 * rg.to_numpy() * rng.standard_normal(len(rg))
    out = rg + noise
    out.index.name = "time"
    assert len(out) == days * records_per_day
    return out.rename("rg")
