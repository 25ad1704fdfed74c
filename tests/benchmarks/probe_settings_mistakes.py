"""Probe: plausible site and settings mistakes on the grassland example (round mistakes43).

Each case edits a copy of ``examples/quillmoor_grassland.toml`` (the CSV linked beside
it), runs ``process_site_config`` (what ``run`` calls) and prints whether it was refused
(the error line), warned (new warnings against the clean run) or silent, and the moves
of the annual NEE, GPP and Reco against the clean run's stated 1 sigma.

    PYTHONPATH=$PWD python tests/benchmarks/probe_settings_mistakes.py [--only NAME ...] [--use]

Round mistakes48 added 35 cases (mappings, units, windows in records, percentages as
shares, zones, the clock check off) and ``--use``: how far a user's own number moves
where the result is used wrongly.

Round mistakes54 added 54 cases (44 of the grassland, 10 of the maize logger; the time
zone's sign, longitude west for east, degrees and minutes as decimals, a year start
written day first, columns exchanged in the mapping, missing codes that are real values,
another site's position, settings the config does not know): see DEVELOPERS.md.

Round mistakes56 added 51 cases (41 of the grassland, 10 of the maize logger; time zones
as abbreviations or offsets, settings in the wrong table, text, lists and booleans where
numbers are meant, large seeds, paths of another system, typed variable keys, a storage
unit apart from the flux's): see DEVELOPERS.md.
"""

from __future__ import annotations

import argparse
import re
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "quillmoor_grassland.toml"
MAIZE = EXAMPLE.with_name("quillmoor_maize_logger.toml")
SUMS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")


def _set(text: str, section: str, key: str, value: str) -> str:
    """Set ``key = value`` in ``[section]`` (replacing a line of the key there)."""
    pattern = re.compile(rf"^{key}\s*=.*$", re.M)
    head = text.index(f"[{section}]\n")
    end = text.find("\n[", head + 1)
    end = len(text) if end < 0 else end
    block = text[head:end]
    block = (pattern.sub(lambda _: f"{key} = {value}", block) if pattern.search(block)
             else block.rstrip("\n") + f"\n{key} = {value}\n")
    return text[:head] + block + text[end:]


def _drop(text: str, key: str) -> str:
    return re.sub(rf"^{key}\s*=.*\n", "", text, flags=re.M)


CASES = {
    "utc_offset in minutes (60)": lambda t: _set(t, "site", "utc_offset", "60"),
    "utc_offset as text '+1'": lambda t: _set(t, "site", "utc_offset", '"+1"'),
    "utc_offset 0 (UTC assumed)": lambda t: _set(t, "site", "utc_offset", "0"),
    "canopy 'grass'": lambda t: _set(t, "site", "canopy", '"grass"'),
    "canopy 'Short'": lambda t: _set(t, "site", "canopy", '"Short"'),
    "latitude 4.93 (decimal slip)": lambda t: _set(t, "site", "latitude", "4.93"),
    "longitude 1.02 (decimal slip)": lambda t: _set(t, "site", "longitude", "1.02"),
    "longitude 102 (decimal slip)": lambda t: _set(t, "site", "longitude", "102"),
    "seed in [site]": lambda t: _set(_drop(t, "seed"), "site", "seed", "0"),
    "canopy in [processing]": lambda t: _set(_drop(t, "canopy"), "processing", "canopy",
                                             '"short"'),
    "ustar_threshold in [input]": lambda t: _set(t, "input", "ustar_threshold", "0.2"),
    "tair_tolerance 25 (for 2.5)": lambda t: _set(t, "processing", "tair_tolerance", "25"),
    "tair_tolerance 0.25 (for 2.5)": lambda t: _set(t, "processing", "tair_tolerance", "0.25"),
    "rg_tolerance 5 (for 50)": lambda t: _set(t, "processing", "rg_tolerance", "5"),
    "vpd_tolerance 0.05 (kPa/10)": lambda t: _set(t, "processing", "vpd_tolerance", "0.05"),
    "night_rg_threshold 0.01 (kW m-2)": lambda t: _set(t, "processing",
                                                       "night_rg_threshold", "0.01"),
    "night_rg_threshold 1": lambda t: _set(t, "processing", "night_rg_threshold", "1"),
    "ustar_scenarios [84, 50, 16]": lambda t: _set(t, "processing", "ustar_scenarios",
                                                   "[84, 50, 16]"),
    "ustar_scenarios [1.6, 50, 84]": lambda t: _set(t, "processing", "ustar_scenarios",
                                                    "[1.6, 50, 84]"),
    "ustar_scenarios [50]": lambda t: _set(t, "processing", "ustar_scenarios", "[50]"),
    "events 2021-06-31": lambda t: _set(t, "processing", "events", '["2021-06-31"]'),
    "events 06/05/2021": lambda t: _set(t, "processing", "events", '["06/05/2021"]'),
    "events a date not a list": lambda t: _set(t, "processing", "events", '"2021-06-05"'),
    "year_start 13-01": lambda t: _set(t, "processing", "year_start", '"13-01"'),
    "year_start 1-1": lambda t: _set(t, "processing", "year_start", '"1-1"'),
    "ustar fixed, threshold forgotten": lambda t: _set(t, "processing", "ustar_method",
                                                       '"fixed"'),
    "ustar_threshold 0.02 fixed (decimal)": lambda t: _set(
        _set(t, "processing", "ustar_method", '"fixed"'), "processing", "ustar_threshold",
        "0.02"),
    "ustar_min_threshold 0.01": lambda t: _set(t, "processing", "ustar_min_threshold",
                                               "0.01"),
    "e0_bounds [30, 45] (digit lost)": lambda t: _set(t, "processing", "e0_bounds",
                                                      "[30, 45]"),
    "e0_fallback 2 (a Q10)": lambda t: _set(t, "processing", "e0_fallback", "2"),
    "daytime_beta0_max 50": lambda t: _set(t, "processing", "daytime_beta0_max", "50"),
    "gapfill_max_window_days 7": lambda t: _set(t, "processing",
                                                "gapfill_max_window_days", "7"),
    "e0_min_temperature_range 0.5": lambda t: _set(t, "processing",
                                                   "e0_min_temperature_range", "0.5"),
    "rref_window_days 31": lambda t: _set(t, "processing", "rref_window_days", "31"),
    "daytime_window_days 31": lambda t: _set(t, "processing", "daytime_window_days", "31"),
    "ustar_plateau_share 0.5": lambda t: _set(t, "processing", "ustar_plateau_share", "0.5"),
    "ustar_plateau_share 0.95": lambda t: _set(t, "processing", "ustar_plateau_share", "0.95"),
    "ustar_plateau_share 0.9": lambda t: _set(t, "processing", "ustar_plateau_share", "0.9"),
    "night_rg_threshold 2": lambda t: _set(t, "processing", "night_rg_threshold", "2"),
    "agreement_margin 15 (percent)": lambda t: _set(t, "processing", "agreement_margin", "15"),
    "flag_accept [0, 1, 2]": lambda t: _set(t, "input", "flag_accept", "[0, 1, 2]"),
    "missing [-999]": lambda t: _set(t, "input", "missing", "[-999]"),
    "interval_minutes 60 (30 min data)": lambda t: _set(t, "input", "interval_minutes", "60"),
    "time_format day-month swapped": lambda t: _set(t, "input", "time_format",
                                                    '"%Y%d%m%H%M"'),
    "respiration_driver tsoil": lambda t: _set(t, "processing", "respiration_driver",
                                               '"tsoil"'),
    "respiration_driver soil": lambda t: _set(t, "processing", "respiration_driver",
                                              '"soil"'),
    "ustar_bootstrap_draws 5": lambda t: _set(t, "processing", "ustar_bootstrap_draws", "5"),
    "despike_z 20": lambda t: _set(t, "processing", "despike_z", "20"),
    "rg_margin 500": lambda t: _set(t, "processing", "rg_margin", "500"),
    "clock_check warn": lambda t: _set(t, "processing", "clock_check", '"warn"'),
    "events 2021-06-05 (as meant)": lambda t: _set(t, "processing", "events", '["2021-06-05"]'),
    "events 2021-05-06 (day and month exchanged)": lambda t: _set(t, "processing", "events",
                                                                 '["2021-05-06"]'),
    "year_start 12-31 (a year's last day)": lambda t: _set(t, "processing", "year_start",
                                                         '"12-31"'),
    "longitude and utc_offset both west": lambda t: _set(_set(t, "site", "longitude", "-10.2"),
                                                         "site", "utc_offset", "-1"),
    "ustar_min_threshold 0.3 (another site's)": lambda t: _set(t, "processing",
                                                          "ustar_min_threshold", "0.3"),
    "ustar_min_threshold 0.5": lambda t: _set(t, "processing", "ustar_min_threshold", "0.5"),
    "e0_max_relative_error 0.05 (5 %)": lambda t: _set(t, "processing",
                                                       "e0_max_relative_error", "0.05"),
    "e0_window_days 2 (weeks)": lambda t: _set(t, "processing", "e0_window_days", "2"),
    "rref_window_days 1": lambda t: _set(t, "processing", "rref_window_days", "1"),
    "e0_best_windows 30": lambda t: _set(t, "processing", "e0_best_windows", "30"),
    "ustar_temperature_classes 1": lambda t: _set(t, "processing",
                                                  "ustar_temperature_classes", "1"),
    "ustar_classes 5": lambda t: _set(t, "processing", "ustar_classes", "5"),
    "ustar_annual maximum": lambda t: _set(t, "processing", "ustar_annual", '"maximum"'),
    "rg_relative_margin 0": lambda t: _set(t, "processing", "rg_relative_margin", "0"),
    "daytime_curvature 1": lambda t: _set(t, "processing", "daytime_curvature", "1"),
    "ustar_plateau_reference 1": lambda t: _set(t, "processing", "ustar_plateau_reference",
                                                "1"),
    # round mistakes48
    "tsoil mapped to the air column": lambda t: _set(t, "input.columns", "tsoil",
                                                     '"air_temp_c"'),
    "tair mapped to the soil column": lambda t: _set(t, "input.columns", "tair",
                                                     '"soil_temp_5cm"'),
    "units: a unit for nee_flag": lambda t: _set(t, "input.units", "nee_flag",
                                                 '"umol m-2 s-1"'),
    "units: ustar 'cm s-1' (values m s-1)": lambda t: _set(t, "input.units", "ustar",
                                                            '"cm s-1"'),
    "units: tair 'degC'": lambda t: _set(t, "input.units", "tair", '"degC"'),
    "events 2021-06-05T14:00": lambda t: _set(t, "processing", "events",
                                               '["2021-06-05T14:00"]'),
    "events 2020-06-05 (last year's)": lambda t: _set(t, "processing", "events",
                                                       '["2020-06-05"]'),
    "year_start 2021-01-01 (with a year)": lambda t: _set(t, "processing", "year_start",
                                                           '"2021-01-01"'),
    "gapfill_max_window_days 1344 (records)": lambda t: _set(
        t, "processing", "gapfill_max_window_days", "1344"),
    "rref_window_days 192 (records)": lambda t: _set(t, "processing", "rref_window_days",
                                                     "192"),
    "daytime_window_days 192 (records)": lambda t: _set(t, "processing",
                                                        "daytime_window_days", "192"),
    "despike_block_days 624 (records)": lambda t: _set(t, "processing",
                                                       "despike_block_days", "624"),
    "e0_window_days 720 (records)": lambda t: _set(t, "processing", "e0_window_days", "720"),
    "gapfill_interpolation_hours 4 (records)": lambda t: _set(
        t, "processing", "gapfill_interpolation_hours", "4"),
    "ustar_scenarios [2.5, 50, 97.5]": lambda t: _set(t, "processing", "ustar_scenarios",
                                                      "[2.5, 50, 97.5]"),
    "ustar_scenarios [5, 50, 95]": lambda t: _set(t, "processing", "ustar_scenarios",
                                                  "[5, 50, 95]"),
    "ustar_plateau_reference 25 (percent)": lambda t: _set(
        t, "processing", "ustar_plateau_reference", "25"),
    "rg_relative_margin 20 (percent)": lambda t: _set(t, "processing", "rg_relative_margin",
                                                      "20"),
    "ustar_correlation_limit 40 (percent)": lambda t: _set(
        t, "processing", "ustar_correlation_limit", "40"),
    "missing -9999 (not a list)": lambda t: _set(t, "input", "missing", "-9999"),
    "flag_accept ['0'] (text)": lambda t: _set(t, "input", "flag_accept", '["0"]'),
    "random_error_draws 10": lambda t: _set(t, "processing", "random_error_draws", "10"),
    "utc_offset 1 and time_zone UTC": lambda t: _set(t, "input", "time_zone", '"UTC"'),
    "agreement_margin 0.15": lambda t: _set(t, "processing", "agreement_margin", "0.15"),
    "time_marks start (end stamps)": lambda t: _set(t, "input", "time_marks", '"start"'),
    "time_marks middle (end stamps)": lambda t: _set(t, "input", "time_marks", '"middle"'),
    "utc_offset 0 with clock_check off": lambda t: _set(_set(t, "site", "utc_offset", "0"),
                                                        "processing", "clock_check", '"off"'),
    "units: nee 'mg CO2 m-2 s-1' (values µmol)": lambda t: _set(t, "input.units", "nee",
                                                                '"mg CO2 m-2 s-1"'),
    "units: rg 'kW m-2' (values W m-2)": lambda t: _set(t, "input.units", "rg", '"kW m-2"'),
    "units: vpd declaration dropped (kPa read as hPa)": lambda t: t.replace(
        '[input.units]\nvpd = "kPa"\n', '[input.units]\n'),
    "flag_accept [1] (flag read inverted)": lambda t: _set(t, "input", "flag_accept", "[1]"),
    "canopy tall on the grassland": lambda t: _set(t, "site", "canopy", '"tall"'),
    "e0_fallback 100": lambda t: _set(t, "processing", "e0_fallback", "100"),
    "night_rg_threshold 20 (PPFD's compensation point)": lambda t: _set(
        t, "processing", "night_rg_threshold", "20"),
    # round mistakes54
    "utc_offset -1 (sign flipped)": lambda t: _set(t, "site", "utc_offset", "-1"),
    "utc_offset 2 (summer time's)": lambda t: _set(t, "site", "utc_offset", "2"),
    "longitude -10.2 (west for east)": lambda t: _set(t, "site", "longitude", "-10.2"),
    "latitude 49.18 (49°18' as decimals)": lambda t: _set(t, "site", "latitude", "49.18"),
    "longitude 10.12 (10°12' as decimals)": lambda t: _set(t, "site", "longitude", "10.12"),
    "latitude and longitude exchanged": lambda t: _set(_set(t, "site", "latitude", "10.2"),
                                                       "site", "longitude", "49.3"),
    "latitude 41.3 (another site's, 8° off)": lambda t: _set(t, "site", "latitude", "41.3"),
    "latitude 57.3 (another site's, 8° off)": lambda t: _set(t, "site", "latitude", "57.3"),
    "year_start 01-07 (day-month, July meant)": lambda t: _set(t, "processing", "year_start",
                                                              '"01-07"'),
    "year_start 01-04 (day-month, April meant)": lambda t: _set(t, "processing",
                                                               "year_start", '"01-04"'),
    "vpd and rh columns exchanged": lambda t: _set(_set(t, "input.columns", "vpd",
                                                        '"rel_humidity"'),
                                                   "input.columns", "rh", '"vpd_kpa"'),
    "tair and tsoil columns exchanged": lambda t: _set(_set(t, "input.columns", "tair",
                                                            '"soil_temp_5cm"'),
                                                       "input.columns", "tsoil",
                                                       '"air_temp_c"'),
    "rg mapped as ppfd": lambda t: t.replace('rg = "solar_down"', 'ppfd = "solar_down"'),
    "missing [-9999, 0]": lambda t: _set(t, "input", "missing", "[-9999, 0]"),
    "missing [-9999, -1]": lambda t: _set(t, "input", "missing", "[-9999, -1]"),
    "ustar_threshold 20 fixed (cm s-1)": lambda t: _set(
        _set(t, "processing", "ustar_method", '"fixed"'), "processing", "ustar_threshold",
        "20"),
    "seed -1": lambda t: _set(t, "processing", "seed", "-1"),
    "seed 1.5": lambda t: _set(t, "processing", "seed", "1.5"),
    "time_zone Europe/Berlin (standard-time file)": lambda t: _set(
        t, "input", "time_zone", '"Europe/Berlin"'),
    "units: tair 'K' (values °C)": lambda t: _set(t, "input.units", "tair", '"K"'),
    "units: rh 'fraction' (values %)": lambda t: _set(t, "input.units", "rh", '"fraction"'),
    "events 2021-06-04 (UTC day of a local morning)": lambda t: _set(
        t, "processing", "events", '["2021-06-04"]'),
    "latitude -49.3 (south for north)": lambda t: _set(t, "site", "latitude", "-49.3"),
    "time_zone Etc/GMT+1 (POSIX sign, UTC-1)": lambda t: _set(t, "input", "time_zone",
                                                              '"Etc/GMT+1"'),
    "time_zone Etc/GMT-1 (UTC+1, as meant)": lambda t: _set(t, "input", "time_zone",
                                                            '"Etc/GMT-1"'),
    "ustar_min_threshold 1 (cm s-1)": lambda t: _set(t, "processing", "ustar_min_threshold",
                                                     "1"),
    "random_error_draws 0": lambda t: _set(t, "processing", "random_error_draws", "0"),
    "ustar_bootstrap_draws 0": lambda t: _set(t, "processing", "ustar_bootstrap_draws", "0"),
    "ustar_scenarios [] (none)": lambda t: _set(t, "processing", "ustar_scenarios", "[]"),
    "e0_bounds [450, 30] (reversed)": lambda t: _set(t, "processing", "e0_bounds",
                                                     "[450, 30]"),
    "another site's position (52.2 N, 25.0 E, UTC+2)": lambda t: _set(_set(_set(
        t, "site", "latitude", "52.2"), "site", "longitude", "25.0"), "site", "utc_offset",
        "2"),
    "ustar and vpd columns exchanged": lambda t: _set(_set(t, "input.columns", "vpd",
                                                           '"friction_velocity"'),
                                                      "input.columns", "ustar", '"vpd_kpa"'),
    "ustar and vpd columns exchanged, no rh": lambda t: _drop(_set(_set(
        t, "input.columns", "vpd", '"friction_velocity"'), "input.columns", "ustar",
        '"vpd_kpa"'), "rh"),
    "nee_flag mapping dropped": lambda t: _drop(t, "nee_flag"),
    "flag_accept [0, 1]": lambda t: _set(t, "input", "flag_accept", "[0, 1]"),
    "units: vpd 'Pa' (values kPa)": lambda t: _set(t, "input.units", "vpd", '"Pa"'),
    "units: vpd 'Pa' (values kPa), no rh": lambda t: _drop(_set(t, "input.units", "vpd",
                                                               '"Pa"'), "rh"),
    "ustar_threshold 0.5 fixed (a forest's)": lambda t: _set(
        _set(t, "processing", "ustar_method", '"fixed"'), "processing", "ustar_threshold",
        "0.5"),
    "tsoil mapped to the rh column": lambda t: _set(t, "input.columns", "tsoil",
                                                    '"rel_humidity"'),
    "rg and tair columns exchanged": lambda t: _set(_set(t, "input.columns", "rg",
                                                         '"air_temp_c"'),
                                                    "input.columns", "tair", '"solar_down"'),
    "rh mapped to the vpd column, vpd dropped": lambda t: _set(_drop(t, "vpd"),
                                                               "input.columns", "rh",
                                                               '"vpd_kpa"'),
    "elevation 1640 in [site] (feet)": lambda t: _set(t, "site", "elevation", "1640"),
    "measurement_height 300 in [site] (cm)": lambda t: _set(t, "site",
                                                            "measurement_height", "300"),
    "records_per_hour 1 in [input] (30 min data)": lambda t: _set(t, "input",
                                                                  "records_per_hour", "1"),
    # round mistakes56
    "time_zone CST (an abbreviation, ambiguous)": lambda t: _set(t, "input", "time_zone",
                                                              '"CST"'),
    "time_zone IST (an abbreviation, ambiguous)": lambda t: _set(t, "input", "time_zone",
                                                              '"IST"'),
    "time_zone CET (a standard-time file)": lambda t: _set(t, "input", "time_zone", '"CET"'),
    "time_zone MET (a standard-time file)": lambda t: _set(t, "input", "time_zone", '"MET"'),
    "time_zone 'UTC+1' (written as an offset)": lambda t: _set(t, "input", "time_zone",
                                                               '"UTC+1"'),
    "time_zone in [site]": lambda t: _set(t, "site", "time_zone", '"Etc/GMT-1"'),
    "utc_offset in [input]": lambda t: _set(_drop(t, "utc_offset"), "input", "utc_offset",
                                            "1.0"),
    "utc_offset in [processing]": lambda t: _set(_drop(t, "utc_offset"), "processing",
                                                 "utc_offset", "1.0"),
    "seed 2**32": lambda t: _set(t, "processing", "seed", "4294967296"),
    "seed '0' (text)": lambda t: _set(t, "processing", "seed", '"0"'),
    "ustar_threshold 0 fixed": lambda t: _set(_set(t, "processing", "ustar_method", '"fixed"'),
                                              "processing", "ustar_threshold", "0"),
    "ustar_threshold '0.2' fixed (text)": lambda t: _set(
        _set(t, "processing", "ustar_method", '"fixed"'), "processing", "ustar_threshold",
        '"0.2"'),
    "ustar_threshold [0.2] fixed (a list)": lambda t: _set(
        _set(t, "processing", "ustar_method", '"fixed"'), "processing", "ustar_threshold",
        "[0.2]"),
    "latitude [49.3] (a list)": lambda t: _set(t, "site", "latitude", "[49.3]"),
    "latitude '49.3' (text)": lambda t: _set(t, "site", "latitude", '"49.3"'),
    "daytime_night_in_fit 'false' (text)": lambda t: _set(t, "processing",
                                                          "daytime_night_in_fit", '"false"'),
    "daytime_night_in_fit 0 (a number)": lambda t: _set(t, "processing",
                                                        "daytime_night_in_fit", "0"),
    "missing ['-9999'] (text)": lambda t: _set(t, "input", "missing", '["-9999"]'),
    "missing [-9999.0]": lambda t: _set(t, "input", "missing", "[-9999.0]"),
    "missing [-999.9] (another logger's)": lambda t: _set(t, "input", "missing", "[-999.9]"),
    "columns: 'ustr' (typo of ustar)": lambda t: t.replace('ustar = "friction', 'ustr = "friction'),
    "columns: 'tsoil1' (typo of tsoil)": lambda t: t.replace('tsoil = "soil', 'tsoil1 = "soil'),
    "columns: 'Tair' (case)": lambda t: t.replace('tair = "air', 'Tair = "air'),
    "path with backslashes (Windows)": lambda t: _set(t, "input", "path",
                                                      "'.\\quillmoor_grassland.csv'"),
    "path 'C:/data/...' (Windows drive)": lambda t: _set(
        t, "input", "path", "'C:/data/quillmoor_grassland.csv'"),
    "path '~/quillmoor_grassland.csv'": lambda t: _set(t, "input", "path",
                                                       '"~/quillmoor_grassland.csv"'),
    "path listed twice": lambda t: _set(t, "input", "path",
                                        '["quillmoor_grassland.csv", "quillmoor_grassland.csv"]'),
    "ustar_scenarios 50 (a scalar)": lambda t: _set(t, "processing", "ustar_scenarios", "50"),
    "events '2021-06-05' with a local hour 23:30": lambda t: _set(
        t, "processing", "events", '["2021-06-05T23:30"]'),
    "events beyond the record (2023-06-05)": lambda t: _set(t, "processing", "events",
                                                            '["2023-06-05"]'),
    "year_start '2023-01-01' (beyond the record)": lambda t: _set(t, "processing",
                                                                  "year_start",
                                                                  '"2023-01-01"'),
    "interval_minutes '30' (text)": lambda t: _set(t, "input", "interval_minutes", '"30"'),
    "clock_check false (a boolean)": lambda t: _set(t, "processing", "clock_check", "false"),
    "units: rg 'umol m-2 s-1' (values W m-2)": lambda t: _set(t, "input.units", "rg",
                                                              '"umol m-2 s-1"'),
    "ustar_scenarios [16, 84] (no median)": lambda t: _set(t, "processing", "ustar_scenarios",
                                                           "[16, 84]"),
    "seed given twice": lambda t: t + "seed = 1\n",
    "seed 2**70": lambda t: _set(t, "processing", "seed", "1180591620717411303424"),
    "time_marks in [processing]": lambda t: _set(_drop(t, "time_marks"), "processing",
                                                 "time_marks", '"end"'),
    "flag_accept [] (none)": lambda t: _set(t, "input", "flag_accept", "[]"),
    "missing [] (none)": lambda t: _set(t, "input", "missing", "[]"),
    "canopy 'short ' (a blank after)": lambda t: _set(t, "site", "canopy", '"short "'),
}

#: Mistakes of the maize logger example (civil time, storage, PAR, two flags).
MAIZE_CASES = {
    "maize: time_zone left out (civil time)": lambda t: _drop(t, "time_zone"),
    "maize: canopy tall": lambda t: _set(t, "site", "canopy", '"tall"'),
    "maize: flag_accept [0, 1, 2]": lambda t: _set(t, "input", "flag_accept", "[0, 1, 2]"),
    "maize: flag_accept [0]": lambda t: _set(t, "input", "flag_accept", "[0]"),
    "maize: rows_after_header 0 (units line as data)": lambda t: _set(
        t, "input", "rows_after_header", "0"),
    "maize: time_zone Europe/London": lambda t: _set(t, "input", "time_zone",
                                                     '"Europe/London"'),
    "maize: night_rg_threshold 0.01": lambda t: _set(t, "processing", "night_rg_threshold",
                                                     "0.01"),
    # round mistakes54
    "maize: ppfd mapped as rg": lambda t: t.replace('ppfd = "PAR_in"', 'rg = "PAR_in"'),
    "maize: storage mapping dropped": lambda t: _drop(t, "storage"),
    "maize: nee and storage exchanged": lambda t: t.replace(
        'nee = "co2_turb"', 'nee = "co2_store"').replace('storage = "co2_store"',
                                                         'storage = "co2_turb"'),
    "maize: utc_offset 2 beside time_zone": lambda t: _set(t, "site", "utc_offset", "2"),
    "maize: time_zone Etc/GMT-1 (civil file as standard)": lambda t: _set(
        t, "input", "time_zone", '"Etc/GMT-1"'),
    "maize: missing [-9999, 0] (the flags' 0)": lambda t: _set(t, "input", "missing",
                                                               "[-9999, 0]"),
    "maize: nee mapped to the storage column": lambda t: _drop(t.replace(
        'nee = "co2_turb"', 'nee = "co2_store"'), "storage"),
    "maize: ustar and tsoil exchanged": lambda t: _set(_set(t, "input.columns", "ustar",
                                                            '"T_soil"'),
                                                       "input.columns", "tsoil", '"u_star"'),
    "maize: missing [-9999, 100] (RH at saturation)": lambda t: _set(t, "input", "missing",
                                                                      "[-9999, 100]"),
    "maize: flag_accept [0, 1] for QC_flux alone": lambda t: _set(t, "input.columns",
                                                                  "nee_flag", '"QC_flux"'),
    # round mistakes56
    "maize: files listed last first": lambda t: _set(
        t, "input", "path", '["quillmoor_maize_logger/maize_2021_2.dat", '
        '"quillmoor_maize_logger/maize_2021_1.dat"]'),
    "maize: time_zone CET": lambda t: _set(t, "input", "time_zone", '"CET"'),
    "maize: units: ppfd 'W m-2' (values µmol)": lambda t: _set(t, "input.units", "ppfd",
                                                                '"W m-2"') if "[input.units]" in t
    else t.replace("[processing]", '[input.units]\nppfd = "W m-2"\n\n[processing]'),
    "maize: units: storage 'mg CO2 m-2 s-1' (values µmol)": lambda t: t.replace(
        "[processing]", '[input.units]\nstorage = "mg CO2 m-2 s-1"\n\n[processing]'),
    "maize: time_marks left out": lambda t: _drop(t, "time_marks"),
    "maize: encoding utf-8 (latin-1 file)": lambda t: _set(t, "input", "encoding", '"utf-8"'),
    "maize: time_format month first": lambda t: _set(t, "input", "time_format",
                                                     '"%m.%d.%Y %H:%M"'),
    "maize: time_zone CEST (summer abbreviation)": lambda t: _set(t, "input", "time_zone",
                                                                  '"CEST"'),
    "maize: decimal '.' (comma file)": lambda t: _set(t, "input", "decimal", '"."'),
    "maize: flag_accept [0, 1] as text '0,1'": lambda t: _set(t, "input", "flag_accept",
                                                              '"0,1"'),
}


def run(text: str, folder: Path):
    from fluxpart.errors import FluxpartError
    from fluxpart.pipeline import process_site_config
    config = folder / "site.toml"
    config.write_text(text)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = process_site_config(config)
    except FluxpartError as error:
        return None, str(error).splitlines()[0], ()
    return result, None, tuple(result.warnings) + tuple(str(w.message) for w in caught)


def print_outcome(name: str, outcome, clean_warnings, base) -> None:
    """Print a case's outcome of :func:`run`: refused, or warned (its new warnings) or
    silent, with the moves of the annual sums against the clean run's 1 sigma."""
    result, error, found = outcome
    if error:
        print(f"{name}: REFUSED {error[:300]}")
        return
    new = [w for w in found if w not in clean_warnings]
    row = result.annual.iloc[0]
    moves = ", ".join(f"{s} {row[s] - base[s]:+.1f} ({(row[s] - base[s]) / base[s + '_uncertainty_total']:+.1f}σ)"
                      for s in SUMS)
    print(f"{name}: {'WARNED' if new else 'SILENT'} {moves}")
    for w in dict.fromkeys(new):
        print(f"    - {w[:300]}")
    sys.stdout.flush()


def print_use_mistakes(result) -> None:
    """How wrong a user's own number is where the result is used wrongly (round
    mistakes48): the daily sigmas added in quadrature for an annual one, and the time
    series' ``nee`` (as read, with its gaps) summed for a budget."""
    annual = result.annual.iloc[0]
    for flux in SUMS:
        days = float(np.sqrt((result.daily[f"{flux}_sigma"] ** 2).sum()))
        total = annual[f"{flux}_uncertainty_total"]
        print(f"use: {flux} daily sigmas in quadrature {days:.1f} against the annual "
              f"{total:.1f} g C m-2 (x{total / days:.1f})")
    series = result.timeseries
    grams = float(series.index.to_series().diff().median().total_seconds()) * 12.011e-6
    print(f"use: time series nee summed (gaps skipped) {series['nee'].sum() * grams:.1f}, "
          f"its mean times the records {series['nee'].mean() * len(series) * grams:.1f}, "
          f"against the annual {annual['nee']:.1f} g C m-2")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--only", nargs="*", default=None)
    parser.add_argument("--maize", action="store_true", help="the maize logger example")
    parser.add_argument("--use", action="store_true",
                        help="also the use mistakes on the clean run (round mistakes48)")
    args = parser.parse_args(argv)
    example = MAIZE if args.maize else EXAMPLE
    cases = MAIZE_CASES if args.maize else CASES
    text = example.read_text()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        data = "quillmoor_maize_logger" if args.maize else "quillmoor_grassland.csv"
        (folder / data).symlink_to(example.parent / data)
        clean, _, clean_warnings = run(text, folder)
        base = clean.annual.iloc[0]
        print("clean:", ", ".join(f"{s} {base[s]:.1f} (1σ {base[s + '_uncertainty_total']:.1f})"
                                   for s in SUMS))
        if args.use:
            print_use_mistakes(clean)
        for name, edit in cases.items():
            if args.only and not any(o in name for o in args.only):
                continue
            print_outcome(name, run(edit(text), folder), clean_warnings, base)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
