"""Probe: plausible mistakes in the data a tower team hands over (rounds mistakes44-57).

Each case edits a copy of the grassland example's file (``examples/quillmoor_grassland.csv``,
fictional) as a user's spreadsheet, logger or merge would (``MAIZE_CASES``: the maize
example's two logger files, fictional, since round mistakes55), writes it beside a copy of its
site config, runs ``process_site_config`` (what ``run`` calls) and prints whether it was
refused (the error line), warned (new warnings against the clean run) or silent, and the
moves of the annual NEE, GPP and Reco against the clean run's stated 1 sigma.

    PYTHONPATH=$PWD python tests/benchmarks/probe_data_mistakes.py [--only NAME ...]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from probe_settings_mistakes import SUMS, print_outcome  # noqa: E402
from probe_settings_mistakes import run as run_config  # noqa: E402

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "quillmoor_grassland.toml"
MISSING = -9999.0
PER_DAY = 48


def _stamps(frame):
    return pd.to_datetime(frame["stamp_end"].astype(str), format="%Y%m%d%H%M")


def _months(frame, months):
    return _stamps(frame).dt.month.isin(months).to_numpy()


def _with(frame, column, values):
    out = frame.copy()
    out[column] = values
    return out


def _present(frame, column):
    return frame[column].to_numpy() != MISSING


def _set_unit(text, key, unit):
    return text.replace("[input.units]\n", f"[input.units]\n{key} = \"{unit}\"\n", 1)


def two_years_same_stamps(frame, text):
    return pd.concat([frame, frame], ignore_index=True), text


def two_years_same_data(frame, text):
    later = frame.copy()
    later["stamp_end"] = (_stamps(frame) + pd.DateOffset(years=1)).dt.strftime("%Y%m%d%H%M")
    return pd.concat([frame, later], ignore_index=True), text


def two_years_same_stamps_new_values(frame, text):
    """A second year's file whose stamps were written with the first year's."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=5).with_suffix(".csv"),
                            dtype={"stamp_end": str})
    return pd.concat([frame, other], ignore_index=True), text


def logger_replay(frame, text):
    """The last three months a copy of the first three (a logger's memory replayed)."""
    out = frame.copy()
    target = np.flatnonzero(_months(frame, [10, 11, 12]))
    source = np.arange(len(target))
    columns = [c for c in frame.columns if c != "stamp_end"]
    out.loc[target, columns] = frame.loc[source, columns].to_numpy()
    return out, text


def hourly_by_sum(frame, text, nee_only=False):
    """Resampled to hourly records with ``.sum()`` (NEE only, or every column)."""
    data = frame.replace(MISSING, np.nan)
    data.index = _stamps(frame)
    groups = data.drop(columns="stamp_end").resample("1h", closed="right", label="right")
    summed = groups.sum(min_count=2)
    if nee_only:
        summed = groups.mean().assign(co2_exchange=summed["co2_exchange"])
    summed["qc_co2"] = groups["qc_co2"].max()
    summed.insert(0, "stamp_end", summed.index.strftime("%Y%m%d%H%M"))
    return summed.fillna(MISSING).reset_index(drop=True), text


def hourly_by_default_sum(frame, text):
    """Resampled to hourly records with ``.sum()`` as pandas defaults: 0 for an empty hour."""
    data = frame.replace(MISSING, np.nan)
    data.index = _stamps(frame)
    groups = data.drop(columns="stamp_end").resample("1h", closed="right", label="right")
    out = groups.mean().assign(co2_exchange=groups["co2_exchange"].sum(),
                               qc_co2=groups["qc_co2"].max())
    out.insert(0, "stamp_end", out.index.strftime("%Y%m%d%H%M"))
    return out.fillna(MISSING).reset_index(drop=True), text


def rg_an_hour_east(frame, text):
    """Rg of a station 15 degrees east: its sun rises an hour earlier."""
    rg = frame["solar_down"].to_numpy()
    return _with(frame, "solar_down", np.r_[rg[2:], rg[-2:]]), text


def par_umol_as_rg(frame, text):
    rg = frame["solar_down"].to_numpy()
    return _with(frame, "solar_down", np.where(rg == MISSING, MISSING, rg * 2.11)), text


def par_watts_as_rg(frame, text):
    rg = frame["solar_down"].to_numpy()
    return _with(frame, "solar_down", np.where(rg == MISSING, MISSING, rg * 0.46)), text


def rh_as_vpd_hpa(frame, text):
    text = text.replace('vpd = "kPa"', 'vpd = "hPa"')
    return _with(frame, "vpd_kpa", frame["rel_humidity"].to_numpy()), text


def shelter_in_sun(frame, text):
    """Air temperature of a shelter in the sun: up to 5 K warm in full sun."""
    tair, rg = frame["air_temp_c"].to_numpy(), frame["solar_down"].to_numpy()
    heat = 5.0 * np.clip(rg / 800.0, 0.0, 1.0)
    return _with(frame, "air_temp_c", np.where(tair == MISSING, MISSING,
                                               np.round(tair + heat, 2))), text


def soil_at_50cm(frame, text):
    """A soil probe at 50 cm: no daily cycle, the seasonal one damped and two weeks late.

    Heat conduction, damping depth about 2 m for the annual wave and 0.1 m for the
    daily one (Campbell and Norman 1998, ch. 8 (m)).
    """
    soil = frame["soil_temp_5cm"].replace(MISSING, np.nan)
    daily = soil.rolling(PER_DAY * 15, center=True, min_periods=PER_DAY).mean()
    mean = float(soil.mean())
    deep = mean + (daily - mean) * np.exp(-0.5 / 2.0)
    deep = pd.Series(np.roll(deep.interpolate(limit_direction="both").to_numpy(), PER_DAY * 13))
    return _with(frame, "soil_temp_5cm", np.round(deep.to_numpy(), 2)), text


def ustar_cm(frame, text):
    u = frame["friction_velocity"].to_numpy()
    return _with(frame, "friction_velocity", np.where(u == MISSING, MISSING, u * 100)), text


def water_flux_as_nee(frame, text):
    """The H2O flux in mmol m-2 s-1 (evaporation: about 0.4 Rg / 44 kJ mol-1)."""
    rng = np.random.default_rng(4)
    rg = frame["solar_down"].replace(MISSING, 0.0).clip(lower=0).to_numpy()
    water = 0.4 * rg / 44.0 + 0.05 + rng.normal(0, 0.2, len(rg))
    nee = frame["co2_exchange"].to_numpy()
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(water, 3))), text


def kinematic_nee(frame, text):
    """The covariance w'c' in µmol mol-1 m s-1: NEE over the molar density, about 41."""
    nee = frame["co2_exchange"].to_numpy()
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(nee / 41.0, 4))), text


def month_of_another_site(frame, text):
    """July of another (fictional) site's file pasted over this one's."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=7, variant="c4").with_suffix(".csv"))
    july = _months(frame, [7])
    out = frame.copy()
    columns = [c for c in frame.columns if c != "stamp_end"]
    out.loc[july, columns] = other.loc[july, columns].to_numpy()
    return out, text


def nee_of_another_field(frame, text):
    """July's NEE of another (fictional) field pasted over an outage; the weather kept."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=7, variant="c4").with_suffix(".csv"))
    july = _months(frame, [7])
    out = frame.copy()
    out.loc[july, "co2_exchange"] = other.loc[july, "co2_exchange"].to_numpy()
    return out, text


def weather_of_another_year(frame, text):
    """The weather columns of another year's file joined to this year's fluxes by date."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=5).with_suffix(".csv"))
    out = frame.copy()
    columns = ["solar_down", "air_temp_c", "vpd_kpa", "soil_temp_5cm", "rel_humidity"]
    out[columns] = other[columns].to_numpy()
    return out, text


def filled_flag_unmapped(frame, text):
    """Another tool's gap fills left in (mean diurnal course of 7 days), flag not mapped."""
    nee = frame["co2_exchange"].replace(MISSING, np.nan)
    stamps = _stamps(frame)
    week = (np.arange(len(frame)) // (PER_DAY * 7))
    fills = nee.groupby([week, stamps.dt.hour * 2 + stamps.dt.minute // 30]).transform("mean")
    filled = nee.fillna(fills).fillna(MISSING).round(3)
    return _with(frame, "co2_exchange", filled.to_numpy()), text.replace(
        'nee_flag = "qc_co2"\n', "")


def codes_per_column(frame, text):
    """Missing codes of three logger programs: -6999 in tair, 9999 in u*, -999 in tsoil."""
    out = frame.copy()
    for column, code in (("air_temp_c", -6999.0), ("friction_velocity", 9999.0),
                         ("soil_temp_5cm", -999.0)):
        values = out[column].to_numpy()
        out[column] = np.where(values == MISSING, code, values)
    rng = np.random.default_rng(2)
    for column, code in (("air_temp_c", -6999.0), ("friction_velocity", 9999.0),
                         ("soil_temp_5cm", -999.0)):
        lost = rng.random(len(out)) < 0.03
        out.loc[lost, column] = code
    return out, text


def _stuck(frame, column, start, days):
    values = frame[column].to_numpy().copy()
    begin = int(np.flatnonzero(_stamps(frame) >= pd.Timestamp(start))[0])
    values[begin:begin + days * PER_DAY] = values[begin - 1]
    return _with(frame, column, values)


def stuck_tair(frame, text):
    return _stuck(frame, "air_temp_c", "2021-06-10 12:00", 5), text


def stuck_ustar(frame, text):
    return _stuck(frame, "friction_velocity", "2021-08-03 02:00", 6), text


def zero_for_missing(frame, text):
    nee = frame["co2_exchange"].to_numpy()
    return _with(frame, "co2_exchange", np.where(nee == MISSING, 0.0, nee)), text


def _daily_mean(frame, column, decimals):
    values = frame[column].replace(MISSING, np.nan)
    day = (_stamps(frame) - pd.Timedelta(minutes=1)).dt.date
    mean = values.groupby(day.to_numpy()).transform("mean").round(decimals).fillna(MISSING)
    return _with(frame, column, mean.to_numpy())


def daily_mean_tair(frame, text):
    """A climate station's daily mean air temperature written into each record."""
    return _daily_mean(frame, "air_temp_c", 2), text


def hourly_rg_repeated(frame, text):
    """Hourly Rg (a station's, or a satellite product's) repeated in both half-hours."""
    rg = frame["solar_down"].replace(MISSING, np.nan).to_numpy()
    pairs = np.nanmean(rg.reshape(-1, 2), axis=1)
    return _with(frame, "solar_down", np.round(np.repeat(pairs, 2), 1)), text


def net_radiation_clipped(frame, text):
    """Net radiation (about 0.7 Rg - 50 W m-2) with its negative values written 0."""
    rg = frame["solar_down"].to_numpy()
    net = np.clip(0.7 * rg - 50.0, 0.0, None)
    return _with(frame, "solar_down", np.where(rg == MISSING, MISSING, np.round(net, 1))), text


def flag_inverted(frame, text):
    """The quality flag written 2 for good and 0 for bad (another convention)."""
    flag = frame["qc_co2"].to_numpy()
    return _with(frame, "qc_co2", np.where(flag == 0, 2, 0)), text


def tair_tenths(frame, text):
    tair = frame["air_temp_c"].to_numpy()
    return _with(frame, "air_temp_c", np.where(tair == MISSING, MISSING,
                                               np.round(tair * 10))), text


def vpd_hpa_declared_kpa(frame, text):
    vpd = frame["vpd_kpa"].to_numpy()
    return _with(frame, "vpd_kpa", np.where(vpd == MISSING, MISSING, vpd * 10)), text


def nee_despiked_to_median(frame, text):
    """Values beyond 3 MAD of a day's records replaced by the day's median (a spreadsheet)."""
    nee = frame["co2_exchange"].replace(MISSING, np.nan)
    day = np.arange(len(frame)) // PER_DAY
    median = nee.groupby(day).transform("median")
    spread = (nee - median).abs().groupby(day).transform("median")
    wild = (nee - median).abs() > 3 * 1.4826 * spread
    out = nee.where(~wild, median).round(3).fillna(MISSING)
    return _with(frame, "co2_exchange", out.to_numpy()), text


CASES = {
    "two years, the second with the first's stamps": two_years_same_stamps,
    "two years, the second a copy of the first": two_years_same_data,
    "two years' files, both with the first's stamps": two_years_same_stamps_new_values,
    "Oct-Dec a replay of Jan-Mar": logger_replay,
    "hourly by .sum() (every column)": hourly_by_sum,
    "hourly by .sum() (NEE only)": lambda f, t: hourly_by_sum(f, t, nee_only=True),
    "hourly by .sum() (NEE, pandas' 0 for empty hours)": hourly_by_default_sum,
    "Rg of a station 15 degrees east": rg_an_hour_east,
    "PAR (µmol) mapped as Rg": par_umol_as_rg,
    "PAR (W m-2) mapped as Rg": par_watts_as_rg,
    "RH % in the VPD column (hPa)": rh_as_vpd_hpa,
    "VPD in hPa declared kPa": vpd_hpa_declared_kpa,
    "tair of a shelter in the sun (+5 K)": shelter_in_sun,
    "soil at 50 cm as tsoil": soil_at_50cm,
    "u* in cm s-1": ustar_cm,
    "H2O flux (mmol) as NEE": water_flux_as_nee,
    "kinematic flux w'c' as NEE": kinematic_nee,
    "July of another site pasted": month_of_another_site,
    "July NEE of another field (weather kept)": nee_of_another_field,
    "weather of another year joined": weather_of_another_year,
    "gap fills left in, flag unmapped": filled_flag_unmapped,
    "missing codes per column": codes_per_column,
    "tair stuck 5 days": stuck_tair,
    "u* stuck 6 days": stuck_ustar,
    "NEE 0 for missing": zero_for_missing,
    "daily-mean tair in each record": daily_mean_tair,
    "hourly Rg repeated per half-hour": hourly_rg_repeated,
    "net radiation (clipped at 0) as Rg": net_radiation_clipped,
    "flag inverted (2 good, 0 bad)": flag_inverted,
    "tair in tenths of °C": tair_tenths,
    "NEE spikes set to the day's median": nee_despiked_to_median,
}


# Round mistakes47: further mistakes, each checked against the cases above first.

def _scaled(frame, column, factor, decimals=4):
    values = frame[column].to_numpy()
    return _with(frame, column, np.where(values == MISSING, MISSING,
                                         np.round(values * factor, decimals)))


def rg_kj_per_record(frame, text):
    """Rg as the energy of each half-hour in kJ m-2 (W m-2 x 1800 s / 1000)."""
    return _scaled(frame, "solar_down", 1.8, 1), text


def nee_gc_per_record(frame, text):
    """NEE as g C m-2 per half-hour (µmol m-2 s-1 x 1800 s x 12.011e-6), no unit written."""
    return _scaled(frame, "co2_exchange", 1800 * 12.011e-6, 5), text


def marks_start_declared(frame, text):
    """End stamps declared as the start of each record (one record late)."""
    return frame, text.replace('time_marks = "end"', 'time_marks = "start"')


def stamps_mid_read_as_end(frame, text):
    """Stamps at each record's middle (00:15, 00:45) read as its end: 15 min early."""
    stamps = _stamps(frame) - pd.Timedelta(minutes=15)
    return _with(frame, "stamp_end", stamps.dt.strftime("%Y%m%d%H%M").to_numpy()), text


def wind_as_ustar(frame, text):
    """The cup's wind speed mapped as u*: U / u* = ln(z / z0) / kappa, 3 m over
    grass of z0 = 0.03 m, about 11.5 (log wind profile, Stull 1988 (m))."""
    return _scaled(frame, "friction_velocity", np.log(3.0 / 0.03) / 0.4, 3), text


def sheltered_wind_as_ustar(frame, text):
    """The same at a sheltered mast (a median below 1.5 m s-1): U = 5 u*."""
    return _scaled(frame, "friction_velocity", 5.0, 3), text


def reflected_as_rg(frame, text):
    """The downward-facing pyranometer (reflected shortwave, albedo 0.22) mapped as Rg."""
    return _scaled(frame, "solar_down", 0.22, 1), text


def daily_mean_rg(frame, text):
    """A satellite product's daily mean Rg written into each record."""
    return _daily_mean(frame, "solar_down", 1), text


def methane_as_nee(frame, text):
    """A CH4 flux in nmol m-2 s-1 mapped as NEE: always an emission, 20-60 by the
    warmth of the soil (Q10 about 3, wetland emissions (m))."""
    rng = np.random.default_rng(6)
    soil = frame["soil_temp_5cm"].replace(MISSING, 10.0).to_numpy()
    ch4 = 30.0 * 3.0 ** ((soil - 15.0) / 10.0) + rng.normal(0, 3.0, len(soil))
    nee = frame["co2_exchange"].to_numpy()
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(ch4, 2))), text


def hourly_nee_repeated(frame, text):
    """Hourly NEE (the mean of each hour) repeated in both half-hours."""
    nee = frame["co2_exchange"].replace(MISSING, np.nan).to_numpy()
    pairs = nee.reshape(-1, 2)
    counts = np.isfinite(pairs).sum(axis=1)
    means = np.nansum(pairs, axis=1) / np.maximum(counts, 1)
    out = np.repeat(np.where(counts > 0, means, np.nan), 2)
    return _with(frame, "co2_exchange", np.where(np.isnan(out), MISSING,
                                                 np.round(out, 3))), text


def sonic_as_tair(frame, text):
    """The sonic's temperature as tair: the virtual temperature, T (1 + 0.51 q), about
    +1 K in summer, with 0.3 K of noise (Kaimal and Gaynor 1991 (m))."""
    tair = frame["air_temp_c"].to_numpy()
    rh = frame["rel_humidity"].to_numpy()
    es = 6.112 * np.exp(17.62 * tair / (243.12 + tair))
    q = 0.622 * es * rh / 100 / 1000.0
    rng = np.random.default_rng(8)
    sonic = (tair + 273.15) * (1 + 0.51 * q) - 273.15 + rng.normal(0, 0.3, len(tair))
    return _with(frame, "air_temp_c", np.where((tair == MISSING) | (rh == MISSING), MISSING,
                                               np.round(sonic, 2))), text


def soil_water_as_tsoil(frame, text):
    """Soil water content in % (wet in winter, dry in summer) mapped as tsoil."""
    day = _stamps(frame).dt.day_of_year.to_numpy()
    theta = 30.0 + 8.0 * np.cos(2 * np.pi * (day - 30) / 365.0)
    rng = np.random.default_rng(9)
    theta = theta + np.cumsum(rng.normal(0, 0.02, len(day)))
    return _with(frame, "soil_temp_5cm", np.round(theta, 2)), text


def uncorrected_open_path(frame, text):
    """Open-path NEE without the density (WPL) term: an apparent uptake of about
    -0.003 µmol m-2 s-1 per W m-2 of sensible heat (Webb et al. 1980 (m)), H about 0.3 Rg."""
    rg = frame["solar_down"].replace(MISSING, 0.0).clip(lower=0).to_numpy()
    nee = frame["co2_exchange"].to_numpy()
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(nee - 0.003 * 0.3 * rg, 3))), text


def flag_of_next_record(frame, text):
    """The flag column one row off against NEE (a spreadsheet row inserted)."""
    flag = frame["qc_co2"].to_numpy()
    return _with(frame, "qc_co2", np.r_[flag[1:], flag[-1:]]), text


def lat_lon_exchanged(frame, text):
    return frame, text.replace("latitude = 49.3", "latitude = 10.2").replace(
        "longitude = 10.2", "longitude = 49.3", 1)


def rh_fraction_as_percent_declared(frame, text):
    """RH written as a fraction (0-1) where % is read."""
    return _scaled(frame, "rel_humidity", 0.01, 4), text


def _other_year(column_names):
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=5).with_suffix(".csv"))
    return other[column_names].to_numpy()


def start_stamps_neutral_name(frame, text):
    """Start stamps under a neutral name, declared as ends (the example's default)."""
    stamps = _stamps(frame) - pd.Timedelta(minutes=30)
    out = frame.rename(columns={"stamp_end": "time"})
    out["time"] = stamps.dt.strftime("%Y%m%d%H%M").to_numpy()
    return out, text.replace('time_column = "stamp_end"', 'time_column = "time"')


def ustar_of_another_year(frame, text):
    """The u* column of another year's file joined by date."""
    return _with(frame, "friction_velocity", _other_year(["friction_velocity"])[:, 0]), text


def rg_of_another_station(frame, text):
    """Rg of a station under other clouds (another year's Rg) joined by date."""
    return _with(frame, "solar_down", _other_year(["solar_down"])[:, 0]), text


def rg_gain_high(frame, text):
    """A pyranometer's sensitivity entered 20 % low: every Rg 1.25 times too high."""
    return _scaled(frame, "solar_down", 1.25, 1), text


def rg_gain_low(frame, text):
    """... entered 25 % high: every Rg 0.8 times its value."""
    return _scaled(frame, "solar_down", 0.8, 1), text


# The brief's list of round mistakes47, checked against the named cases (most named before).

def net_radiation_as_rg(frame, text):
    """Net radiation (about 0.7 Rg - 50 W m-2, negative at night) mapped as Rg."""
    rg = frame["solar_down"].to_numpy()
    return _with(frame, "solar_down", np.where(rg == MISSING, MISSING,
                                               np.round(0.7 * rg - 50.0, 1))), text


def rg_mj_per_record(frame, text):
    """Rg as MJ m-2 per half-hour (W m-2 x 1800 s / 1e6)."""
    return _scaled(frame, "solar_down", 1800 / 1e6, 5), text


def tair_fahrenheit(frame, text):
    tair = frame["air_temp_c"].to_numpy()
    return _with(frame, "air_temp_c", np.where(tair == MISSING, MISSING,
                                               np.round(tair * 1.8 + 32.0, 2))), text


def tair_kelvin(frame, text):
    tair = frame["air_temp_c"].to_numpy()
    return _with(frame, "air_temp_c", np.where(tair == MISSING, MISSING,
                                               np.round(tair + 273.15, 2))), text


def summer_time_stamps(frame, text):
    """Stamps in civil time with daylight saving (last Sunday of March to last of
    October), read as standard time."""
    stamps = _stamps(frame)
    summer = (stamps > pd.Timestamp("2021-03-28 02:00")) & (stamps <= pd.Timestamp(
        "2021-10-31 02:00"))
    civil = stamps + pd.to_timedelta(np.where(summer, 60, 0), unit="min")
    out = frame.assign(stamp_end=civil.dt.strftime("%Y%m%d%H%M").to_numpy())
    return out.drop_duplicates("stamp_end", keep="last").reset_index(drop=True), text


def nee_mg_co2(frame, text):
    """NEE in mg CO2 m-2 s-1 (x 44.01e-3), no unit written."""
    return _scaled(frame, "co2_exchange", 44.01e-3, 5), text


def year_start_june(frame, text):
    return frame, text.replace("[processing]\n", '[processing]\nyear_start = "06-01"\n', 1)


CASES.update({
    "Rg in kJ m-2 per record": rg_kj_per_record,
    "NEE in g C m-2 per record, no unit": nee_gc_per_record,
    "end stamps declared start": marks_start_declared,
    "mid-interval stamps read as end": stamps_mid_read_as_end,
    "wind speed as u*": wind_as_ustar,
    "sheltered wind speed as u*": sheltered_wind_as_ustar,
    "reflected shortwave as Rg": reflected_as_rg,
    "daily-mean Rg in each record": daily_mean_rg,
    "CH4 flux (nmol) as NEE": methane_as_nee,
    "hourly NEE repeated per half-hour": hourly_nee_repeated,
    "sonic temperature as tair": sonic_as_tair,
    "soil water (%) as tsoil": soil_water_as_tsoil,
    "open-path NEE without density term": uncorrected_open_path,
    "flag one row off": flag_of_next_record,
    "latitude and longitude exchanged": lat_lon_exchanged,
    "RH as a fraction": rh_fraction_as_percent_declared,
    "start stamps, neutral name, read as end": start_stamps_neutral_name,
    "u* of another year joined": ustar_of_another_year,
    "Rg of another station joined": rg_of_another_station,
    "Rg sensitivity 20 % low (x1.25)": rg_gain_high,
    "Rg sensitivity 25 % high (x0.8)": rg_gain_low,
    "net radiation (negative at night) as Rg": net_radiation_as_rg,
    "Rg in MJ m-2 per record": rg_mj_per_record,
    "tair in °F": tair_fahrenheit,
    "tair in K": tair_kelvin,
    "summer time in half the year": summer_time_stamps,
    "NEE in mg CO2 m-2 s-1, no unit": nee_mg_co2,
    "year_start 06-01 (in the season)": year_start_june,
})


# Round mistakes49: a tower's own upstream processing gone wrong (the flux computation,
# its corrections and the meteorological sensors' processing).

def _nee(frame):
    return frame["co2_exchange"].to_numpy()


def _day_hours(frame):
    """Hour of day of each record's start [h]."""
    stamps = _stamps(frame) - pd.Timedelta(minutes=15)
    return (stamps.dt.hour + stamps.dt.minute / 60.0).to_numpy()


def spectral_twice(frame, text):
    """The spectral (high-frequency loss) correction applied twice: NEE x1.15."""
    return _scaled(frame, "co2_exchange", 1.15), text


def time_lag_wrong(frame, text):
    """The analyser's time lag a few seconds off: the covariance damped, NEE x0.85."""
    return _scaled(frame, "co2_exchange", 0.85), text


def tilt_missing(frame, text):
    """No tilt correction: w takes a share of the horizontal wind, a bias that changes
    with the wind direction (here a regime drawn per day), up to ±25 % of NEE."""
    days = np.arange(len(frame)) // PER_DAY
    direction = np.random.default_rng(49).uniform(0, 2 * np.pi, days.max() + 1)[days]
    nee = _nee(frame)
    return _with(frame, "co2_exchange", np.where(
        nee == MISSING, MISSING, np.round(nee * (1 + 0.25 * np.cos(direction)), 4))), text


def night_release_capped(frame, text):
    """A despiking limit of 4 µmol m-2 s-1: every value above it removed (the warm
    nights' release lost)."""
    nee = _nee(frame)
    return _with(frame, "co2_exchange", np.where(nee > 4.0, MISSING, nee)), text


def night_release_clipped(frame, text):
    """... the same limit as a clip: every value above 4 written 4."""
    nee = _nee(frame)
    return _with(frame, "co2_exchange", np.where(nee > 4.0, 4.0, nee)), text


def calibration_hour_kept(frame, text):
    """A daily zero/span calibration 03:00-04:00 kept as data: span gas through the
    cell, NEE +15 µmol m-2 s-1 in the two records, flag 0."""
    hours = _day_hours(frame)
    nee = _nee(frame)
    hour = (hours >= 3) & (hours < 4) & (nee != MISSING)
    return _with(frame, "co2_exchange", np.where(hour, nee + 15.0, nee)), text


def storage_left_out(frame, text):
    """The storage term left out: on calm nights half the release stays below the sensor
    (NEE x0.5 where u* < 0.15), flushed evenly over the first 3 h of daylight."""
    nee, ustar, rg = _nee(frame), frame["friction_velocity"].to_numpy(), \
        frame["solar_down"].to_numpy()
    calm = (nee != MISSING) & (ustar != MISSING) & (ustar < 0.15) & (rg < 5)
    dawn = np.flatnonzero(np.diff((rg >= 5).astype(int)) == 1) + 1
    out, held, start = nee.copy(), 0.0, 0
    for first in dawn:
        held = 0.5 * nee[start:first][calm[start:first]].sum()
        out[start:first][calm[start:first]] *= 0.5
        morning = np.arange(first, min(first + 6, len(nee)))
        morning = morning[nee[morning] != MISSING]
        out[morning] += held / max(len(morning), 1)
        start = first + 6
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(out, 4))), text


def heated_sonic_winter(frame, text):
    """A heated sonic in Dec-Feb: u* biased 0.1 m s-1 high (more calm nights kept)."""
    ustar = frame["friction_velocity"].to_numpy()
    winter = _months(frame, [12, 1, 2]) & (ustar != MISSING)
    return _with(frame, "friction_velocity", np.where(winter, np.round(ustar + 0.1, 3),
                                                      ustar)), text


def logger_swap_other_site(frame, text):
    """After a logger swap, Nov-Dec are another (fictional) site's records."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=11).with_suffix(".csv"),
                            dtype={"stamp_end": str})
    out = frame.copy()
    rows = np.flatnonzero(_months(frame, [11, 12]))
    columns = [c for c in frame.columns if c != "stamp_end"]
    out.loc[rows, columns] = other.loc[rows, columns].to_numpy()
    return out, text


def vpd_from_kelvin(frame, text):
    """VPD from the Magnus formula fed air temperature in K: es(T + 273.15) (1 - RH)."""
    tair, rh = frame["air_temp_c"].to_numpy(), frame["rel_humidity"].to_numpy()
    kelvin = tair + 273.15
    es = 0.6108 * np.exp(17.27 * kelvin / (kelvin + 237.3))
    bad = (tair == MISSING) | (rh == MISSING)
    return _with(frame, "vpd_kpa", np.where(bad, MISSING, np.round(es * (1 - rh / 100), 4))), \
        text


def rg_dust_drift(frame, text):
    """A pyranometer's dome dusting over: Rg falls linearly to -10 % over the year."""
    rg = frame["solar_down"].to_numpy()
    drift = 1 - 0.10 * np.arange(len(rg)) / len(rg)
    return _with(frame, "solar_down", np.where(rg == MISSING, MISSING,
                                               np.round(rg * drift, 1))), text


def soil_probe_dug_out(frame, text):
    """The soil probe dug out (a badger) in May: from then on it reads near-surface air,
    the air's daily amplitude and more in sun."""
    tsoil, tair = frame["soil_temp_5cm"].to_numpy(), frame["air_temp_c"].to_numpy()
    rg = frame["solar_down"].to_numpy()
    out_ = _months(frame, range(5, 13)) & (tair != MISSING)
    exposed = np.round(tair + 3.0 * np.clip(rg, 0, None) / 800.0, 2)
    return _with(frame, "soil_temp_5cm", np.where(out_, exposed, tsoil)), text


def nee_sign_flipped_half(frame, text):
    """A new processing version from July writes NEE with the opposite sign."""
    nee = _nee(frame)
    later = _months(frame, range(7, 13)) & (nee != MISSING)
    return _with(frame, "co2_exchange", np.where(later, -nee, nee)), text


CASES.update({
    "spectral correction twice (NEE x1.15)": spectral_twice,
    "time lag off (NEE x0.85)": time_lag_wrong,
    "tilt correction missing (±25 % by day)": tilt_missing,
    "night release above 4 removed (despiking)": night_release_capped,
    "night release clipped at 4": night_release_clipped,
    "calibration hour 03-04 kept": calibration_hour_kept,
    "storage left out (calm nights to morning)": storage_left_out,
    "heated sonic u* +0.1 in winter": heated_sonic_winter,
    "Nov-Dec of another site (logger swap)": logger_swap_other_site,
    "VPD from tair in K": vpd_from_kelvin,
    "Rg dust drift -10 % over the year": rg_dust_drift,
    "tsoil probe dug out from May": soil_probe_dug_out,
    "NEE sign flipped from July": nee_sign_flipped_half,
})


# Round mistakes50: further mistakes of data, settings and use, each checked against the
# cases above first (variants within the record, other towers' files, settings copied).

def _from_july(frame, column, edit):
    values = frame[column].to_numpy()
    later = _months(frame, range(7, 13)) & (values != MISSING)
    return _with(frame, column, np.where(later, edit(values), values))


def nee_sign_flipped_first_half(frame, text):
    """A logger program that wrote uptake positive until a change in July."""
    nee = _nee(frame)
    early = _months(frame, range(1, 7)) & (nee != MISSING)
    return _with(frame, "co2_exchange", np.where(early, -nee, nee)), text


def nee_mg_from_july(frame, text):
    """A new logger program from July writes NEE in mg CO2 m-2 s-1 (x 44.01e-3)."""
    return _from_july(frame, "co2_exchange", lambda v: np.round(v * 44.01e-3, 5)), text


def vpd_hpa_from_july(frame, text):
    """VPD in hPa from July (a humidity sensor's new program), declared kPa."""
    return _from_july(frame, "vpd_kpa", lambda v: np.round(v * 10, 3)), text


def ustar_cm_from_july(frame, text):
    """u* in cm s-1 from July (a sonic's new output), read as m s-1."""
    return _from_july(frame, "friction_velocity", lambda v: np.round(v * 100, 2)), text


def tsoil_fahrenheit_from_july(frame, text):
    """The soil temperature in °F from July (a logger program change)."""
    return _from_july(frame, "soil_temp_5cm", lambda v: np.round(v * 1.8 + 32, 2)), text


def sonic_damped_as_tair(frame, text):
    """The sonic's temperature as tair: virtual temperature +2 K (moist air, a path
    heated by its transducers (m)) with the daily cycle damped by a third around the
    day's mean (a sonic mounted in the canopy's shade (m))."""
    tair = frame["air_temp_c"].replace(MISSING, np.nan)
    day = np.arange(len(frame)) // PER_DAY
    mean = tair.groupby(day).transform("mean")
    sonic = mean + (tair - mean) * (2.0 / 3.0) + 2.0
    return _with(frame, "air_temp_c", sonic.round(2).fillna(MISSING).to_numpy()), text


def sonic_as_tair_in_summer(frame, text):
    """The same sonic temperature pasted into tair for June-August (the humidity probe's
    own thermometer lost for a summer; its VPD and RH kept)."""
    sonic, _ = sonic_damped_as_tair(frame, text)
    summer = _months(frame, [6, 7, 8])
    return _with(frame, "air_temp_c", np.where(summer, sonic["air_temp_c"],
                                               frame["air_temp_c"])), text


def hourly_start_read_as_end(frame, text):
    """60-min records (the means of each hour) stamped at their start, read as ends."""
    data = frame.replace(MISSING, np.nan)
    data.index = _stamps(frame)
    groups = data.drop(columns="stamp_end").resample("1h", closed="right", label="right")
    hourly = groups.mean().assign(qc_co2=groups["qc_co2"].max())
    stamps = hourly.index - pd.Timedelta(minutes=60)
    hourly.insert(0, "stamp_end", stamps.strftime("%Y%m%d%H%M"))
    return hourly.round(4).fillna(MISSING).reset_index(drop=True), text


def _two_towers(frame, keep):
    """This tower's file to August and another (fictional) tower's from June,
    concatenated; the overlapping stamps' duplicates dropped, ``keep`` first or last."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=11).with_suffix(".csv"),
                            dtype={"stamp_end": str})
    ours = frame[_months(frame, range(1, 9))]
    theirs = other[_months(other, range(6, 13))]
    joined = pd.concat([ours, theirs], ignore_index=True)
    joined = joined.drop_duplicates("stamp_end", keep=keep)
    return joined.sort_values("stamp_end").reset_index(drop=True)


def _two_towers_kept(frame, minutes):
    """Both towers' records of the overlap (June-August) kept, the other tower's logger
    clock ``minutes`` ahead (0: the same stamps)."""
    from fluxpart.demo import write_example
    with tempfile.TemporaryDirectory() as tmp:
        other = pd.read_csv(write_example(tmp, seed=11).with_suffix(".csv"),
                            dtype={"stamp_end": str})
    theirs = other[_months(other, range(6, 13))].copy()
    theirs["stamp_end"] = (_stamps(theirs) + pd.Timedelta(minutes=minutes)).dt.strftime(
        "%Y%m%d%H%M")
    joined = pd.concat([frame[_months(frame, range(1, 9))], theirs], ignore_index=True)
    return joined.sort_values("stamp_end", kind="stable").reset_index(drop=True)


def two_towers_first(frame, text):
    return _two_towers(frame, "first"), text


def two_towers_last(frame, text):
    return _two_towers(frame, "last"), text


def flag_zero_bad(frame, text):
    """A flag of another scale, 1 good and 0 bad, mapped as the site flag (0 kept)."""
    flag = frame["qc_co2"].to_numpy()
    return _with(frame, "qc_co2", np.where(flag == 0, 1, 0)), text


def flag_zero_bad_all_kept(frame, text):
    """... with ``flag_accept = [0, 1]`` written to make the run pass."""
    out, _ = flag_zero_bad(frame, text)
    return out, text.replace("missing = [-9999]\n", "missing = [-9999]\nflag_accept = [0, 1]\n",
                             1)


def latitude_degrees_minutes(frame, text):
    """49°18' written 49.18 (degrees and minutes) for 49.3."""
    return frame, text.replace("latitude = 49.3", "latitude = 49.18")


def _processing(text, line):
    return text.replace("[processing]\n", f"[processing]\n{line}\n", 1)


def ustar_fixed_low(frame, text):
    """A fixed u* threshold of another (windier, shorter) site: 0.05 m s-1."""
    return frame, _processing(text, 'ustar_method = "fixed"\nustar_threshold = 0.05')


def ustar_fixed_forest(frame, text):
    """A fixed u* threshold of a forest: 0.4 m s-1."""
    return frame, _processing(text, 'ustar_method = "fixed"\nustar_threshold = 0.4')


def soil_50cm_as_driver(frame, text):
    """The 50-cm soil probe as tsoil, set as the respiration driver."""
    out, _ = soil_at_50cm(frame, text)
    return out, _processing(text, 'respiration_driver = "tsoil"')


def year_start_southern(frame, text):
    """A budget year from July, the habit of a southern site's team, at this northern site."""
    return frame, _processing(text, 'year_start = "07-01"')


def summer_time_clock_warn(frame, text):
    """Daylight-saving stamps with the clock check's refusal turned into a warning."""
    out, text = summer_time_stamps(frame, text)
    return out, _processing(text, 'clock_check = "warn"')


def summer_time_clock_off(frame, text):
    """... and with the clock check off."""
    out, text = summer_time_stamps(frame, text)
    return out, _processing(text, 'clock_check = "off"')


CASES.update({
    "summer time in half the year, clock_check warn": summer_time_clock_warn,
    "summer time in half the year, clock_check off": summer_time_clock_off,
    "NEE sign flipped Jan-Jun (fixed in July)": nee_sign_flipped_first_half,
    "NEE in mg CO2 from July": nee_mg_from_july,
    "VPD in hPa from July (declared kPa)": vpd_hpa_from_july,
    "u* in cm s-1 from July": ustar_cm_from_july,
    "tsoil in °F from July": tsoil_fahrenheit_from_july,
    "sonic temperature as tair (+2 K, damped)": sonic_damped_as_tair,
    "sonic temperature as tair in Jun-Aug": sonic_as_tair_in_summer,
    "60-min start stamps read as end": hourly_start_read_as_end,
    "two towers' files, overlap kept first": two_towers_first,
    "two towers' files, overlap kept last": two_towers_last,
    "flag of another scale (1 good, 0 bad)": flag_zero_bad,
    "flag of another scale, flag_accept [0, 1]": flag_zero_bad_all_kept,
    "latitude in degrees-minutes (49.18)": latitude_degrees_minutes,
    "u* fixed 0.05 (another site's)": ustar_fixed_low,
    "u* fixed 0.4 (a forest's)": ustar_fixed_forest,
    "soil at 50 cm as respiration driver": soil_50cm_as_driver,
    "year_start 07-01 (a southern habit)": year_start_southern,
})


# round mistakes51: ten more a tower scientist makes, each checked against the cases above
def ustar_km_per_hour(frame, text):
    """u* in km h-1 (m s-1 x 3.6), a handheld anemometer's habit."""
    return _scaled(frame, "friction_velocity", 3.6, 3), text


def june_pasted_into_july(frame, text):
    """June's 30 days of records (every column) copied over July 1-30 (a spreadsheet's
    paste one sheet off)."""
    out = frame.copy()
    stamps = _stamps(frame)
    june = np.flatnonzero(stamps.dt.month.eq(6).to_numpy())
    july = np.flatnonzero(stamps.dt.month.eq(7).to_numpy())[:len(june)]
    columns = [c for c in frame.columns if c != "stamp_end"]
    out.loc[july, columns] = frame.loc[june, columns].to_numpy()
    return out, text


def tsoil_kelvin(frame, text):
    """Soil temperature in K beside the air's in °C (two loggers' programs)."""
    soil = frame["soil_temp_5cm"].to_numpy()
    return _with(frame, "soil_temp_5cm", np.where(soil == MISSING, MISSING,
                                                  np.round(soil + 273.15, 2))), text


def stamps_day_late_from_march(frame, text):
    """A program that counts a 29 February in 2021: every stamp from 1 March one day late
    (1 March empty, the year's last day's records dropped)."""
    stamps = _stamps(frame)
    late = stamps > pd.Timestamp("2021-03-01 00:00")
    moved = stamps.where(~late, stamps + pd.Timedelta(days=1))
    out = frame.assign(stamp_end=moved.dt.strftime("%Y%m%d%H%M"))
    return out[moved <= pd.Timestamp("2022-01-01 00:00")].reset_index(drop=True), text


def year_stamped_a_year_early(frame, text):
    """The whole file stamped a year early (2021 written 2020, a leap year): every date
    from March a day off against the sun, the budget labelled 2020."""
    stamps = _stamps(frame) - pd.DateOffset(years=1)
    return frame.assign(stamp_end=stamps.dt.strftime("%Y%m%d%H%M")), text


def nee_and_flag_swapped(frame, text):
    """The NEE and its flag columns exchanged in [input.columns]."""
    return frame, text.replace('nee = "co2_exchange"', 'nee = "qc_co2"').replace(
        'nee_flag = "qc_co2"', 'nee_flag = "co2_exchange"')


def tair_tsoil_swapped(frame, text):
    """tair and tsoil exchanged in [input.columns]."""
    return frame, text.replace('tair = "air_temp_c"', 'tair = "soil_temp_5cm"').replace(
        'tsoil = "soil_temp_5cm"', 'tsoil = "air_temp_c"')


def utc_offset_sign_flipped(frame, text):
    """utc_offset -1 for +1 (east of Greenwich written as west)."""
    return frame, text.replace("utc_offset = 1.0", "utc_offset = -1.0")


def local_time_8h_declared_utc(frame, text):
    """A site 8 hours east of Greenwich (longitude 115.2, where the example's stamps are
    its local time) with utc_offset 0 written: local stamps read as UTC."""
    return frame, text.replace("longitude = 10.2", "longitude = 115.2").replace(
        "utc_offset = 1.0", "utc_offset = 0.0")


def local_time_8h_time_zone_utc(frame, text):
    """... the same site, utc_offset 8 but time_zone "UTC" declared for the stamps."""
    return frame, text.replace("longitude = 10.2", "longitude = 115.2").replace(
        "utc_offset = 1.0", "utc_offset = 8.0").replace(
        'time_marks = "end"\n', 'time_marks = "end"\ntime_zone = "UTC"\n')


def latitude_sign_flipped(frame, text):
    """Latitude -49.3 for 49.3 (a southern site's config copied)."""
    return frame, text.replace("latitude = 49.3", "latitude = -49.3")


def nee_hourly_sum_from_july(frame, text):
    """The logger reprogrammed in July to 60-min records whose NEE is the sum of the
    two half-hours (the other columns means)."""
    out, _ = hourly_by_sum(frame, text, nee_only=True)
    early = frame[_stamps(frame) <= pd.Timestamp("2021-07-01 00:00")]
    late = out[pd.to_datetime(out["stamp_end"], format="%Y%m%d%H%M") > pd.Timestamp(
        "2021-07-01 00:00")]
    return pd.concat([early, late], ignore_index=True), text


CASES.update({
    "u* in km h-1": ustar_km_per_hour,
    "June pasted into July": june_pasted_into_july,
    "tsoil in K (tair in °C)": tsoil_kelvin,
    "stamps a day late from 1 March (a 29 Feb counted)": stamps_day_late_from_march,
    "file stamped a year early (2020)": year_stamped_a_year_early,
    "NEE and flag columns swapped": nee_and_flag_swapped,
    "tair and tsoil columns swapped": tair_tsoil_swapped,
    "utc_offset sign flipped (-1)": utc_offset_sign_flipped,
    "local time UTC+8 read as UTC (utc_offset 0)": local_time_8h_declared_utc,
    "local time UTC+8, time_zone UTC": local_time_8h_time_zone_utc,
    "latitude sign flipped (-49.3)": latitude_sign_flipped,
    "hourly NEE sums from July": nee_hourly_sum_from_july,
    "two towers' files, overlap both kept": lambda f, t: (_two_towers_kept(f, 0), t),
    "two towers' files, overlap both kept, clocks 1 min apart": lambda f, t: (
        _two_towers_kept(f, 1), t),
})


# round mistakes52: thirteen more, each checked against the cases above
def soil_heat_flux_as_tsoil(frame, text):
    """The soil heat flux plate's column (W m-2: about a tenth of the net radiation by day,
    -10 to -30 at night, Campbell and Norman 1998, ch. 8 (m)) mapped as tsoil."""
    rg = frame["solar_down"].to_numpy()
    heat = np.where(rg == MISSING, MISSING, np.round(0.1 * (0.7 * rg - 50.0) - 8.0, 1))
    return _with(frame, "soil_temp_5cm", heat), text


def _set_setting(text, section, line):
    return text.replace(f"[{section}]\n", f"[{section}]\n{line}\n", 1)


def hourly_means_declared_30(frame, text):
    """Hourly records (the means of each hour) with interval_minutes = 30 written."""
    data = frame.replace(MISSING, np.nan)
    data.index = _stamps(frame)
    groups = data.drop(columns="stamp_end").resample("1h", closed="right", label="right")
    out = groups.mean().assign(qc_co2=groups["qc_co2"].max())
    out.insert(0, "stamp_end", out.index.strftime("%Y%m%d%H%M"))
    return (out.fillna(MISSING).reset_index(drop=True),
            _set_setting(text, "input", "interval_minutes = 30"))


def ustar_km_per_hour_from_july(frame, text):
    """u* in km h-1 from July (a sonic's new program), read as m s-1."""
    ustar = frame["friction_velocity"].to_numpy()
    late = _months(frame, range(7, 13)) & (ustar != MISSING)
    return _with(frame, "friction_velocity", np.where(late, np.round(ustar * 3.6, 3),
                                                      ustar)), text


def ustar_zero_for_missing(frame, text):
    """u* written 0 for missing (a logger's habit)."""
    ustar = frame["friction_velocity"].to_numpy()
    return _with(frame, "friction_velocity", np.where(ustar == MISSING, 0.0, ustar)), text


def nee_as_nep(frame, text):
    """NEP (uptake positive) mapped as NEE for the whole year."""
    return _scaled(frame, "co2_exchange", -1.0, 3), text


def dew_point_as_tair(frame, text):
    """The dew point (Magnus formula, Alduchov and Eskridge 1996 (m)) mapped as tair."""
    tair = frame["air_temp_c"].to_numpy()
    rh = np.clip(frame["rel_humidity"].to_numpy(), 1.0, 100.0)
    gamma = np.log(rh / 100.0) + 17.625 * tair / (243.04 + tair)
    dew = 243.04 * gamma / (17.625 - gamma)
    bad = (tair == MISSING) | (frame["rel_humidity"].to_numpy() == MISSING)
    return _with(frame, "air_temp_c", np.where(bad, MISSING, np.round(dew, 2))), text


def vpd_pa_declared_hpa(frame, text):
    """VPD in Pa (a humidity logger's output) declared hPa: read 10 times too large."""
    return _scaled(frame, "vpd_kpa", 1000.0, 1), text.replace('vpd = "kPa"', 'vpd = "hPa"')


CASES.update({
    "soil heat flux (W m-2) as tsoil": soil_heat_flux_as_tsoil,
    "hourly file, interval_minutes 30": hourly_means_declared_30,
    "u* in km h-1 from July": ustar_km_per_hour_from_july,
    "u* 0 for missing": ustar_zero_for_missing,
    "u* in km h-1, canopy tall written": lambda f, t: (
        ustar_km_per_hour(f, t)[0], t.replace('canopy = "short"', 'canopy = "tall"')),
    "Rg in kW m-2, no unit": lambda f, t: (_scaled(f, "solar_down", 0.001, 5), t),
    "NEP (uptake positive) as NEE": nee_as_nep,
    "dew point as tair": dew_point_as_tair,
    "VPD in Pa declared hPa": vpd_pa_declared_hpa,
    "events a harvest in winter (2021-01-20)": lambda f, t: (
        f, _processing(t, 'events = ["2021-01-20"]')),
    "events next year's (2022-06-05, outside the record)": lambda f, t: (
        f, _processing(t, 'events = ["2022-06-05"]')),
    "year_start 01-07 (day-month for 1 July)": lambda f, t: (
        f, _processing(t, 'year_start = "01-07"')),
    "longitude -10.2 (west; utc_offset 1 kept)": lambda f, t: (
        f, t.replace("longitude = 10.2", "longitude = -10.2")),
    "latitude 39.3 (a digit slip)": lambda f, t: (
        f, t.replace("latitude = 49.3", "latitude = 39.3")),
})

# round mistakes53: gains on NEE and the full density terms of an open path left out
def open_path_without_density_terms(frame, text):
    """Open-path NEE without the density (WPL) terms: F loses (ρc/T) H / (ρ cp) and
    μ (ρc/ρd) E (Webb et al. 1980 (m)), 0.0485 µmol m-2 s-1 per W m-2 of sensible heat and
    0.0093 per W m-2 of latent heat at 15 °C; H = 0.3 Rg - 15 (negative at night) and
    LE = 0.3 Rg, a rough surface energy balance (m)."""
    rg = frame["solar_down"].replace(MISSING, 0.0).clip(lower=0).to_numpy()
    nee = frame["co2_exchange"].to_numpy()
    lost = 0.0485 * (0.3 * rg - 15.0) + 0.0093 * 0.3 * rg
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(nee - lost, 3))), text


CASES.update({
    "NEE gain x1.2 (a wrong calibration)": lambda f, t: (
        _scaled(f, "co2_exchange", 1.2, 3), t),
    "NEE gain x2.0": lambda f, t: (_scaled(f, "co2_exchange", 2.0, 3), t),
    "open-path NEE without density terms (H and LE)": open_path_without_density_terms,
})


# Round mistakes55: further mistakes of a tower team's hand-over, each checked against the
# cases above first (partial-year variants, sensor offsets, stuck sensors, shifted joins).

def _from_july_start(frame, column, edit):
    """``edit`` applied from the first record starting in July (an end stamp of 1 January
    00:00 closes December's last record)."""
    values = frame[column].to_numpy()
    starts = _stamps(frame) - pd.Timedelta(minutes=1)
    later = starts.dt.month.ge(7).to_numpy() & (values != MISSING)
    return _with(frame, column, np.where(later, edit(values), values))


def _offset_where(frame, column, mask, offset, decimals=2):
    values = frame[column].to_numpy()
    chosen = mask & (values != MISSING)
    return _with(frame, column, np.where(chosen, np.round(values + offset, decimals), values))


def rg_night_offset(frame, text):
    """A pyranometer's zero offset left in: +12 W m-2 in every record, day and night
    (a logger's offset not subtracted, common practice to remove (m))."""
    return _offset_where(frame, "solar_down", np.ones(len(frame), bool), 12.0, 1), text


def rg_negative_at_night(frame, text):
    """A thermopile's thermal offset: -12 W m-2 at night (clear nights cool the dome,
    a few to 15 W m-2 below zero, Dutton et al. 2001 (m)), left in and not clipped."""
    rg = frame["solar_down"].to_numpy()
    return _offset_where(frame, "solar_down", rg <= 5.0, -12.0, 1), text


def nee_step_from_july(frame, text):
    """From July another tower's NEE, of a wetter plot: every record +1.5 µmol m-2 s-1."""
    return _from_july_start(frame, "co2_exchange", lambda v: np.round(v + 1.5, 3)), text


def nee_zero_drift(frame, text):
    """An analyser's zero drifting over the year: NEE +0 in January to +1.0 in December."""
    nee = _nee(frame)
    drift = np.linspace(0.0, 1.0, len(frame))
    return _with(frame, "co2_exchange", np.where(nee == MISSING, MISSING,
                                                 np.round(nee + drift, 3))), text


def tair_fahrenheit_from_july(frame, text):
    """tair in °F from July (a logger program change), declared °C."""
    return _from_july_start(frame, "air_temp_c", lambda v: np.round(v * 1.8 + 32, 2)), text


def rh_fraction_from_july(frame, text):
    """RH as a fraction (0-1) from July (a new humidity probe's output), read as %."""
    return _from_july_start(frame, "rel_humidity", lambda v: np.round(v / 100, 3)), text


def par_as_rg_from_july(frame, text):
    """The pyranometer replaced in July by a quantum sensor (µmol m-2 s-1) under the Rg
    column: x2.1 (McCree 1972 (m))."""
    return _from_july_start(frame, "solar_down", lambda v: np.round(v * 2.1, 1)), text


def rg_a_day_late(frame, text):
    """Rg of a station's file joined by date one day late (every Rg the previous day's)."""
    rg = frame["solar_down"].to_numpy()
    return _with(frame, "solar_down", np.r_[rg[:PER_DAY], rg[:-PER_DAY]]), text


def nee_a_record_late(frame, text):
    """NEE one row late against the weather and its flag (a cell inserted in the column)."""
    nee = _nee(frame)
    return _with(frame, "co2_exchange", np.r_[MISSING, nee[:-1]]), text


def stuck_tair_weeks(frame, text):
    """tair stuck at one reading for three weeks of summer (a logger's frozen channel)."""
    return _stuck(frame, "air_temp_c", "2021-07-05 14:00", 21), text


def stuck_ustar_weeks(frame, text):
    """u* stuck at one reading for three weeks (a sonic's lost output held by the logger)."""
    return _stuck(frame, "friction_velocity", "2021-07-05 02:00", 21), text


def wet_humidity_sensor(frame, text):
    """A humidity probe wet for three weeks of July: RH 100 % and VPD 0 (saturated)."""
    out = frame.copy()
    stamps = _stamps(frame)
    wet = ((stamps >= pd.Timestamp("2021-07-05")) & (stamps < pd.Timestamp("2021-07-26"))).to_numpy()
    out.loc[wet & _present(frame, "vpd_kpa"), "vpd_kpa"] = 0.0
    out.loc[wet & _present(frame, "rel_humidity"), "rel_humidity"] = 100.0
    return out, text


def may_nee_into_june(frame, text):
    """May's NEE copied over June 1-30 (a spreadsheet's copy-paste; the weather kept)."""
    out = frame.copy()
    stamps = _stamps(frame)
    june = np.flatnonzero(((stamps > pd.Timestamp("2021-06-01")) &
                           (stamps <= pd.Timestamp("2021-07-01"))).to_numpy())
    out.loc[june, "co2_exchange"] = frame["co2_exchange"].to_numpy()[june - 31 * PER_DAY]
    return out, text


def stuck_tsoil_month(frame, text):
    """tsoil stuck at its 1 June reading for two months (the probe's channel frozen)."""
    return _stuck(frame, "soil_temp_5cm", "2021-06-01 00:30", 61), text


def storage_added_twice(frame, text):
    """A storage column mapped while the NEE already holds the storage term: added twice.
    The storage of a short canopy: the night's release accumulating below the sensor
    on calm nights and flushed in the morning (Finnigan 2006 (m)); modelled as a swing of
    about +0.6 in the evening and -1.2 after sunrise (µmol m-2 s-1)."""
    hours = _day_hours(frame)
    storage = np.where((hours >= 19) | (hours < 5), 0.6,
                       np.where((hours >= 6) & (hours < 10), -1.2, 0.0))
    out = frame.copy()
    out["storage_co2"] = np.round(storage, 2)
    text = text.replace('nee_flag = "qc_co2"', 'nee_flag = "qc_co2"\nstorage = "storage_co2"')
    return out, text


def nee_sign_flipped_august(frame, text):
    """NEE written with uptake positive in August only (a month's logger program)."""
    nee = _nee(frame)
    august = _months(frame, [8]) & (nee != MISSING)
    return _with(frame, "co2_exchange", np.where(august, -nee, nee)), text


def _shift_from(frame, start, end, minutes):
    """Stamps of the records in (start, end] moved by ``minutes``; duplicates keep the
    later file's record."""
    stamps = _stamps(frame)
    moved = ((stamps > pd.Timestamp(start)) & (stamps <= pd.Timestamp(end))).to_numpy()
    shifted = stamps + pd.to_timedelta(np.where(moved, minutes, 0), unit="min")
    out = frame.assign(stamp_end=shifted.dt.strftime("%Y%m%d%H%M").to_numpy())
    out = out.drop_duplicates("stamp_end", keep="last")
    return out.sort_values("stamp_end").reset_index(drop=True)


def summer_time_second_file(frame, text):
    """Two half-year files, the second (from July) in civil time with daylight saving
    to 31 October, the first in standard time: an hour late in July-October."""
    return _shift_from(frame, "2021-07-01 00:00", "2021-10-31 02:00", 60), text


def utc_stamps_from_july(frame, text):
    """A new logger from July set to UTC at this UTC+1 site: an hour early from then on."""
    return _shift_from(frame, "2021-07-01 00:00", "2022-01-01 00:00", -60), text


def par_watts_as_rg_from_july(frame, text):
    """The pyranometer replaced in July by a PAR sensor in W m-2 (x0.46, Britton and
    Dodd 1976 (m)) under the Rg column."""
    return _from_july_start(frame, "solar_down", lambda v: np.round(v * 0.46, 1)), text


def soil_50cm_from_july(frame, text):
    """The soil probe reinstalled at 50 cm in July: from then on damped and late."""
    deep, _ = soil_at_50cm(frame, text)
    starts = _stamps(frame) - pd.Timedelta(minutes=1)
    later = starts.dt.month.ge(7).to_numpy() & _present(frame, "soil_temp_5cm")
    values = np.where(later, deep["soil_temp_5cm"].to_numpy(), frame["soil_temp_5cm"].to_numpy())
    return _with(frame, "soil_temp_5cm", values), text


def ustar_low_from_july(frame, text):
    """u* of a new sonic program from July x0.7 (one covariance of the two, m)."""
    return _from_july_start(frame, "friction_velocity", lambda v: np.round(v * 0.7, 3)), text


CASES.update({
    "Rg zero offset +12 W m-2 left in": rg_night_offset,
    "Rg negative at night (-12 W m-2 thermal offset)": rg_negative_at_night,
    "NEE step +1.5 from July (another tower)": nee_step_from_july,
    "NEE zero drift 0 to +1.0 over the year": nee_zero_drift,
    "tair in °F from July": tair_fahrenheit_from_july,
    "RH as a fraction from July": rh_fraction_from_july,
    "PAR (µmol) as Rg from July": par_as_rg_from_july,
    "Rg a day late (joined by date)": rg_a_day_late,
    "NEE one record late": nee_a_record_late,
    "tair stuck 3 weeks": stuck_tair_weeks,
    "u* stuck 3 weeks": stuck_ustar_weeks,
    "humidity probe wet 3 weeks (VPD 0)": wet_humidity_sensor,
    "May NEE pasted into June (weather kept)": may_nee_into_june,
    "tsoil stuck 2 months": stuck_tsoil_month,
    "storage added twice": storage_added_twice,
    "NEE sign flipped in August only": nee_sign_flipped_august,
    "summer time in the second file only (Jul-Oct)": summer_time_second_file,
    "UTC stamps from July (UTC+1 site)": utc_stamps_from_july,
    "PAR (W m-2) as Rg from July": par_watts_as_rg_from_july,
    "soil at 50 cm from July": soil_50cm_from_july,
    "u* x0.7 from July (sonic program)": ustar_low_from_july,
})


# round mistakes57: u* written in km h-1 from a program change on, at a site whose canopy
# is written tall or left unset (the default, "tall"), where the nights' level is within
# a forest's bounds and so was not named
def _ustar_kmh_from(frame, start, end=None):
    starts = _stamps(frame) - pd.Timedelta(minutes=1)
    late = (starts >= pd.Timestamp(start)).to_numpy() & _present(frame, "friction_velocity")
    if end is not None:
        late &= (starts < pd.Timestamp(end)).to_numpy()
    ustar = frame["friction_velocity"].to_numpy()
    return _with(frame, "friction_velocity", np.where(late, np.round(ustar * 3.6, 3), ustar))


def _canopy(text, canopy):
    line = 'canopy = "short"'
    return text.replace(line, f'canopy = "{canopy}"' if canopy else "", 1)


CASES.update({
    "u* in km h-1 from July, canopy tall written": lambda f, t: (
        _ustar_kmh_from(f, "2021-07-01"), _canopy(t, "tall")),
    "u* in km h-1 from July, canopy unset": lambda f, t: (
        _ustar_kmh_from(f, "2021-07-01"), _canopy(t, None)),
    "u* in km h-1 from 17 April, canopy unset": lambda f, t: (
        _ustar_kmh_from(f, "2021-04-17"), _canopy(t, None)),
    "u* in km h-1 from 9 September, canopy tall written": lambda f, t: (
        _ustar_kmh_from(f, "2021-09-09"), _canopy(t, "tall")),
    "u* in km h-1 May to August only, canopy tall written": lambda f, t: (
        _ustar_kmh_from(f, "2021-05-01", "2021-09-01"), _canopy(t, "tall")),
    "u* in km h-1 in the year's last 40 days, canopy unset": lambda f, t: (
        _ustar_kmh_from(f, "2021-11-21"), _canopy(t, None)),
})

# Round mistakes58: the mistakes the closing note of 0.38.0 left silent, planted from a date
# that is no month's first (a recalibration or a logger program change comes on any day).

def _between(frame, column, start, end=None):
    """Records of ``column`` holding a value from ``start`` (to before ``end``)."""
    stamps = _stamps(frame)
    inside = (stamps > pd.Timestamp(start)).to_numpy(copy=True)
    if end is not None:
        inside = inside & (stamps <= pd.Timestamp(end)).to_numpy()
    return inside & (frame[column].to_numpy() != MISSING)


def _nee_gain_from(frame, start, factor):
    """NEE times ``factor`` from ``start`` on (an analyser recalibrated with a wrong span
    gas, a logger multiplier or a unit changed in a new program)."""
    nee = _nee(frame)
    later = _between(frame, "co2_exchange", start)
    return _with(frame, "co2_exchange", np.where(later, np.round(nee * factor, 4), nee))


def _rg_gain_from(frame, start, factor):
    """Rg times ``factor`` from ``start`` on (a dome soiled, a sensitivity entered wrong)."""
    rg = frame["solar_down"].to_numpy()
    later = _between(frame, "solar_down", start)
    return _with(frame, "solar_down", np.where(later, np.round(rg * factor, 1), rg))


def nee_sign_flipped_spring(frame, text):
    """NEE with uptake positive from 10 April to 20 June (a program fixed in June)."""
    nee = _nee(frame)
    inside = _between(frame, "co2_exchange", "2021-04-10", "2021-06-20")
    return _with(frame, "co2_exchange", np.where(inside, -nee, nee)), text


def temperatures_swapped_summer(frame, text):
    """tair and tsoil written into each other's columns from 12 May to 31 August (two
    channels of the logger's wiring exchanged at a sensor swap, and put back)."""
    tair, tsoil = frame["air_temp_c"].to_numpy(), frame["soil_temp_5cm"].to_numpy()
    inside = (_between(frame, "air_temp_c", "2021-05-12", "2021-09-01")
              & (tsoil != MISSING))
    out = _with(frame, "air_temp_c", np.where(inside, tsoil, tair))
    return _with(out, "soil_temp_5cm", np.where(inside, tair, tsoil)), text


def sawtooth_clock(frame, text):
    """A logger clock running 5 min a week fast, set back by a weekly sync: each record
    holds the average of the true half-hour ``lag`` minutes earlier (the lag 0 to 5 min,
    a saw-tooth), every column alike (one logger)."""
    stamps = _stamps(frame)
    week = 7 * 24 * 60
    minutes = ((stamps - stamps.iloc[0]).dt.total_seconds() / 60).to_numpy()
    lag_share = (5.0 * (minutes % week) / week) / 30.0    # of one record
    out = frame.copy()
    for column in [c for c in frame.columns if c not in ("stamp_end", "qc_co2")]:
        values = frame[column].to_numpy().astype(float)
        earlier = np.r_[values[:1], values[:-1]]
        present = (values != MISSING) & (earlier != MISSING)
        mixed = (1.0 - lag_share) * values + lag_share * earlier
        out[column] = np.where(present, np.round(mixed, 4), values)
    return out, text


CASES.update({
    "NEE x1.5 from 12 May (span gas)": lambda f, t: (_nee_gain_from(f, "2021-05-12", 1.5), t),
    "NEE x0.5 from 12 May (gain halved)": lambda f, t: (_nee_gain_from(f, "2021-05-12", 0.5), t),
    "NEE x44/12 from 12 May (g CO2 for g C)": lambda f, t: (
        _nee_gain_from(f, "2021-05-12", 44.0 / 12.0), t),
    "NEE x12/44 from 12 May": lambda f, t: (_nee_gain_from(f, "2021-05-12", 12.0 / 44.0), t),
    "NEE x1.5 from 20 September": lambda f, t: (_nee_gain_from(f, "2021-09-20", 1.5), t),
    "NEE x2 from 20 September": lambda f, t: (_nee_gain_from(f, "2021-09-20", 2.0), t),
    "Rg x0.8 from 3 June (soiled dome)": lambda f, t: (_rg_gain_from(f, "2021-06-03", 0.8), t),
    "saw-tooth clock (+5 min a week, synced back)": sawtooth_clock,
    "NEE sign flipped 10 April to 20 June": nee_sign_flipped_spring,
    "tair and tsoil swapped 12 May to August": temperatures_swapped_summer,
    "VPD in hPa from 12 May (declared kPa)": lambda f, t: (
        _with(f, "vpd_kpa", np.where(_between(f, "vpd_kpa", "2021-05-12"),
                                     np.round(f["vpd_kpa"].to_numpy() * 10, 3),
                                     f["vpd_kpa"].to_numpy())), t),
})

# Round mistakes55 on the maize example's logger export (two half-year files in civil time,
# the turbulent flux and the storage term in separate columns): each case edits the files'
# lines, ``{name: lines}`` of the header's three lines and the records.

MAIZE = EXAMPLE.with_name("quillmoor_maize_logger.toml")
MAIZE_FILES = ("maize_2021_1.dat", "maize_2021_2.dat")
MAIZE_HEADER = 3


def _maize_stamps(lines):
    """Civil stamps of the records' lines (``24:00`` as the next day's midnight)."""
    dates, times = zip(*(line.split(";")[:2] for line in lines), strict=True)
    late = np.array([t == "24:00" for t in times])
    stamps = pd.to_datetime([f"{d} {'00:00' if t == '24:00' else t}"
                             for d, t in zip(dates, times, strict=True)],
                            format="%d.%m.%Y %H:%M")
    return stamps + pd.to_timedelta(np.where(late, 1, 0), unit="D")


def _maize_line_stamp(stamp, line):
    """``line`` with its date and time written for ``stamp`` (midnight as 24:00)."""
    if stamp.hour == 0 and stamp.minute == 0:
        date, time = (stamp - pd.Timedelta(days=1)).strftime("%d.%m.%Y"), "24:00"
    else:
        date, time = stamp.strftime("%d.%m.%Y"), stamp.strftime("%H:%M")
    return ";".join([date, time, *line.split(";")[2:]])


def maize_second_file_standard_time(files):
    """The second half-year's file written in standard time (a new logger's clock) while
    the first keeps civil time with daylight saving, as ``time_zone`` declares: its
    July-October records read an hour early."""
    lines = files[MAIZE_FILES[1]]
    records = lines[MAIZE_HEADER:]
    stamps = _maize_stamps(records)
    summer = np.asarray(stamps <= pd.Timestamp("2021-10-31 03:00"))
    moved = stamps - pd.to_timedelta(np.where(summer, 60, 0), unit="min")
    kept = [_maize_line_stamp(t, line) for t, line in zip(moved, records, strict=True)]
    # the hour of 31 October written twice in civil time is written once in standard time
    seen, unique = set(), []
    for line in kept:
        if line[:16] not in seen:
            seen.add(line[:16])
            unique.append(line)
    return {**files, MAIZE_FILES[1]: lines[:MAIZE_HEADER] + unique}


def maize_second_file_standard_time_no_overlap(files):
    """... with the second file cut where the first ends by its own clock (no overlap
    of stamps left to disagree)."""
    files = maize_second_file_standard_time(files)
    last = _maize_stamps(files[MAIZE_FILES[0]][MAIZE_HEADER:]).max()
    records = files[MAIZE_FILES[1]][MAIZE_HEADER:]
    later = np.asarray(_maize_stamps(records) > last)
    kept = [line for line, keep in zip(records, later, strict=True) if keep]
    return {**files, MAIZE_FILES[1]: files[MAIZE_FILES[1]][:MAIZE_HEADER] + kept}


def maize_storage_in_flux_column(files):
    """The flux column delivered with the storage term already added (NEE), the config
    still mapping the storage column: storage counted twice."""
    out = {}
    for name, lines in files.items():
        rows = []
        for line in lines[MAIZE_HEADER:]:
            cells = line.split(";")
            flux, store = (float(c.replace(",", ".")) for c in cells[2:4])
            if flux != MISSING and store != MISSING:
                cells[2] = f"{flux + store:.3f}".replace(".", ",")
            rows.append(";".join(cells))
        out[name] = lines[:MAIZE_HEADER] + rows
    return out


MAIZE_CASES = {
    "maize: second file in standard time, first civil": maize_second_file_standard_time,
    "maize: second file in standard time, no overlap": maize_second_file_standard_time_no_overlap,
    "maize: storage already in the flux column (added twice)": maize_storage_in_flux_column,
}


def run_maize(files, folder: Path):
    """The settings probe's run on the maize example's files ``{name: lines}``."""
    data = folder / "quillmoor_maize_logger"
    data.mkdir(exist_ok=True)
    for name, lines in files.items():
        (data / name).write_bytes("\r\n".join(lines).encode("latin-1") + b"\r\n")
    return run_config(MAIZE.read_text(), folder)


def maize_main(only) -> None:
    """The maize cases against the maize example's clean run."""
    source = MAIZE.with_suffix("")
    files = {name: (source / name).read_bytes().decode("latin-1").splitlines()
             for name in MAIZE_FILES}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        clean, _, clean_warnings = run_maize(files, folder)
        base = clean.annual.iloc[0]
        print("maize clean:", ", ".join(
            f"{s} {base[s]:.1f} (1σ {base[s + '_uncertainty_total']:.1f})" for s in SUMS))
        for name, edit in MAIZE_CASES.items():
            if only and not any(o in name for o in only):
                continue
            print_outcome(name, run_maize(edit(files), folder), clean_warnings, base)


def run(frame: pd.DataFrame, text: str, folder: Path):
    """The settings probe's run on ``frame`` written as the example's file in ``folder``."""
    frame.to_csv(folder / "quillmoor_grassland.csv", index=False)
    return run_config(text, folder)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--only", nargs="*", default=None)
    args = parser.parse_args(argv)
    text = EXAMPLE.read_text()
    clean_frame = pd.read_csv(EXAMPLE.with_suffix(".csv"), dtype={"stamp_end": str})
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        clean, _, clean_warnings = run(clean_frame, text, folder)
        base = clean.annual.iloc[0]
        print("clean:", ", ".join(f"{s} {base[s]:.1f} (1σ {base[s + '_uncertainty_total']:.1f})"
                                   for s in SUMS))
        for name, edit in CASES.items():
            if args.only and not any(o in name for o in args.only):
                continue
            print_outcome(name, run(*edit(clean_frame, text), folder), clean_warnings, base)
    maize_main(args.only)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
