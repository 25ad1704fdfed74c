"""Probe: a tower scientist's data and setting mistakes planted on clean site-years (round
mistakes60).

INVENTED DATA. Every site here is FICTIONAL: the clean site-years come from the clean-site
probes' own generators (``probe_clean_sites*.generate``), six generators written apart,
one ordinary site-year of each (``SITES``). No number computed from them describes a real
ecosystem or supports any carbon claim.

Each site-year is written once as a plain logger file (a stamp column, one column per
variable, -9999 for no value, a site flag 0 good / 2 rejected on 5 % of the measured records,
whose values a bad record's noise spoils) with its site config, and run by
``process_site_config`` (what ``run`` calls; its warnings hold every ``check`` problem).
Then each mistake of ``MISTAKES`` edits a copy of the frame or of the config as a user's
spreadsheet, logger or typing would, and the probe prints whether the run was REFUSED (its
``error:`` line), WARNED (warnings the clean run did not give) or SILENT, and how far the
annual NEE, GPP and Reco (both partitionings) moved in units of the clean run's stated
1 sigma (``<flux>_uncertainty_total``). ``--csv`` writes one row per site and mistake.

    OMP_NUM_THREADS=1 PYTHONPATH=$PWD nice -n 10 python tests/benchmarks/probe_mistakes60.py \
        [--sites a04,s05] [--only NAME ...] [--csv FILE]

``--soil-scan 0,1`` runs only :func:`fluxpart.soil_depth.deep_soil_probe` on every
site-year of the seven clean generators (false alarms, and power on a 50 cm probe put in
their place; about 6 min a seed).

About 5-10 s per run on one core; 38 mistakes on 7 site-years run some 30 min. Results of
round mistakes60: DEVELOPERS.md's changelog.
"""
from __future__ import annotations

import argparse
import copy
import importlib
import re
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

SUMS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")
MISSING = -9999.0

# (generator module, site name): one ordinary mid-latitude or subtropical site-year each;
# sites with a special habit of the generator (storage added, an outage) are avoided so
# that the clean run is the plain case the mistake is planted on.
SITES = [("probe_clean_sites", "a04"), ("probe_clean_sites_third", "s05"),
         ("probe_clean_sites_fourth", "f01"), ("probe_clean_sites_fifth", "v30"),
         ("probe_clean_sites_sixth", "x20"), ("probe_clean_sites_weather", "w11"),
         ("probe_clean_sites_seventh", "g15")]


def es_kpa(t):
    """Saturation vapour pressure over water, kPa, of t in degC (Tetens 1930 (m))."""
    return 0.6108 * np.exp(17.27 * t / (t + 237.3))


# --------------------------------------------------------------------------- a site-year
def clean_site(module_name: str, name: str, seed: int = 0):
    """The clean frame (canonical columns, stamps as the generator marks them) and the
    site's config as a dict; a flag column ``qc`` added (see the module docstring)."""
    module = importlib.import_module(module_name)
    spec = next(s for s in module.SITES if s[0] == name)
    frame, facts = module.generate(spec, seed)
    frame = frame.copy()
    frame = frame[[c for c in frame.columns if c in ("nee", "rg", "ppfd", "tair", "rh", "vpd",
                                                     "ustar", "tsoil", "storage")]]
    step = int(spec[5])
    if "vpd" in frame:
        # the generator's unit: hPa where the column is ten times the kPa deficit
        implied = es_kpa(frame["tair"]) * (1 - frame["rh"] / 100)
        ratio = float((frame["vpd"] / implied.where(implied > 0.3)).median())
        vpd_unit = "hPa" if ratio > 3 else "kPa"
    else:
        vpd_unit = None
    rng = np.random.default_rng([seed, 60, int(name[1:])])
    measured = frame["nee"].notna().to_numpy()
    bad = measured & (rng.random(len(frame)) < 0.05)
    frame.loc[bad, "nee"] = frame.loc[bad, "nee"] + rng.normal(0.0, 8.0, bad.sum())
    frame["qc"] = np.where(measured, np.where(bad, 2.0, 0.0), np.nan)
    cfg = {"site": {"name": f'"Mistakes60 {name} (fictional)"', "latitude": spec[1],
                    "longitude": spec[2], "utc_offset": float(spec[3]),
                    "canopy": '"tall"' if facts.get("tall") else '"short"'},
           "input": {"path": '"site.csv"', "time_column": '"stamp"',
                     "time_format": '"%Y-%m-%d %H:%M"', "time_marks": f'"{facts["marks"]}"',
                     "missing": "[-9999]"},
           "columns": {c: f'"{c}_col"' for c in frame.columns if c != "qc"},
           "units": {},
           "processing": {}}
    cfg["columns"]["nee_flag"] = '"qc_col"'
    if vpd_unit:
        cfg["units"]["vpd"] = f'"{vpd_unit}"'
    if facts.get("events"):
        cfg["processing"]["events"] = "[" + ", ".join(f'"{e}"' for e in facts["events"]) + "]"
    if facts.get("year_start", "01-01") != "01-01":
        cfg["processing"]["year_start"] = f'"{facts["year_start"]}"'
    return frame, cfg, {"step": step, "lat": spec[1], "lon": spec[2], "utc": float(spec[3]),
                        "module": module, "spec": spec, "seed": seed}


def write(frame: pd.DataFrame, cfg: dict, folder: Path) -> Path:
    """Write the frame as ``site.csv`` and the config as ``site.toml``; return the config."""
    out = frame.rename(columns={c: f"{c}_col" for c in frame.columns})
    out.index = pd.DatetimeIndex(out.index).strftime("%Y-%m-%d %H:%M")
    out.index.name = "stamp"
    (folder / "site.csv").write_text(out.to_csv(na_rep="-9999", float_format="%.6g"))
    lines = ["# FICTIONAL site (tests/benchmarks/probe_mistakes60.py)"]
    for table, head in (("site", "[site]"), ("input", "[input]"),
                        ("columns", "[input.columns]"), ("units", "[input.units]"),
                        ("processing", "[processing]")):
        if cfg[table]:
            lines += ["", head] + [f"{k} = {v}" for k, v in cfg[table].items()]
    config = folder / "site.toml"
    config.write_text("\n".join(lines) + "\n")
    return config


def run(frame, cfg, folder: Path):
    """(annual table or None, error line or None, warnings)."""
    from fluxpart.errors import FluxpartError
    from fluxpart.pipeline import process_site_config
    config = write(frame, cfg, folder)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = process_site_config(config)
    except FluxpartError as error:
        return None, str(error).splitlines()[0], ()
    return (result.annual, None,
            tuple(dict.fromkeys(tuple(result.warnings) + tuple(str(w.message) for w in caught))))


# --------------------------------------------------------------------------- helpers
def _stamps(frame):
    return pd.DatetimeIndex(frame.index)


def _shift_hours(frame, hours, columns=None, mask=None):
    """Values moved so that the record stamped s holds the true record of s - hours."""
    out = frame.copy()
    columns = list(frame.columns) if columns is None else columns
    step_h = (_stamps(frame)[1] - _stamps(frame)[0]).total_seconds() / 3600
    k = int(round(hours / step_h))
    moved = frame[columns].shift(k)
    if mask is None:
        out[columns] = moved
    else:
        out.loc[mask, columns] = moved.loc[mask]
    return out


def _col(edit, column):
    def apply(frame, cfg, info):
        out = frame.copy()
        out[column] = edit(frame, info)
        return out, cfg
    return apply


def _cfg(edit):
    def apply(frame, cfg, info):
        cfg = copy.deepcopy(cfg)
        edit(cfg, info)
        return frame, cfg
    return apply


def _from_july(frame):
    return np.asarray(_stamps(frame) >= pd.Timestamp(_stamps(frame)[0].year, 7, 1))


def _daylight_saving(frame, info):
    """European summer time: last Sunday of March to last Sunday of October (01 UTC);
    the southern sites' summer is October to April (Australian rule, first Sunday)."""
    stamps = _stamps(frame)
    year = stamps[0].year + (1 if stamps[0].month > 6 else 0)

    def last_sunday(month):
        day = pd.Timestamp(year, month, 1) + pd.offsets.MonthEnd(0)
        return day - pd.Timedelta(days=(day.weekday() + 1) % 7)
    if info["lat"] >= 0:
        return np.asarray((stamps >= last_sunday(3) + pd.Timedelta(hours=2))
                          & (stamps < last_sunday(10) + pd.Timedelta(hours=3)))
    first_oct = pd.Timestamp(year, 10, 1)
    start = first_oct + pd.Timedelta(days=(6 - first_oct.weekday()) % 7, hours=2)
    first_apr = pd.Timestamp(year, 4, 1)
    end = first_apr + pd.Timedelta(days=(6 - first_apr.weekday()) % 7, hours=3)
    return np.asarray((stamps >= start) | (stamps < end))


def local_daylight_saving(frame, cfg, info):
    """Stamps in civil time with daylight saving: the summer's records stamped an hour
    late (the record of 12:00 standard time written 13:00)."""
    return _shift_hours(frame, 1.0, mask=_daylight_saving(frame, info)), cfg


def stamps_utc(frame, cfg, info):
    """Stamps in UTC while the config gives the local standard offset."""
    return _shift_hours(frame, -info["utc"]), cfg


def marks_flipped(cfg, info):
    marks = cfg["input"]["time_marks"]
    cfg["input"]["time_marks"] = '"start"' if "end" in marks else '"end"'


def soil_at_50cm(frame, info):
    """A probe at 50 cm: heat conduction damps the daily wave to exp(-0.5 / 0.1) (none
    left) and the annual one to exp(-0.5 / 2.0), and delays the annual one by
    0.5 / 2.0 * 365 / (2 pi) = 14.5 days (damping depths 0.1 and 2 m, Campbell and Norman
    1998, ch. 8 (m))."""
    soil = frame["tsoil"].interpolate(limit_direction="both")
    per_day = int(round(86400 / (_stamps(frame)[1] - _stamps(frame)[0]).total_seconds()))
    daily = soil.rolling(per_day * 15, center=True, min_periods=per_day).mean()
    mean = float(soil.mean())
    deep = mean + (daily - mean) * np.exp(-0.5 / 2.0)
    deep = np.roll(deep.interpolate(limit_direction="both").to_numpy(), per_day * 14)
    return pd.Series(np.round(deep, 2), index=frame.index).where(frame["tsoil"].notna())


def sonic_tair(frame, info):
    """A sonic's temperature: +1.5 K, its daily course damped to 0.6."""
    t = frame["tair"]
    per_day = int(round(86400 / (_stamps(frame)[1] - _stamps(frame)[0]).total_seconds()))
    mean = t.rolling(per_day, center=True, min_periods=per_day // 2).mean()
    return mean + 0.6 * (t - mean) + 1.5


def rh_as_vpd(frame, cfg, info):
    out = frame.copy()
    out["vpd"] = frame["rh"]
    cfg = copy.deepcopy(cfg)
    cfg["columns"]["vpd"] = '"vpd_col"'
    cfg["units"]["vpd"] = '"hPa"'
    return out, cfg


def vpd_wrong_unit(frame, cfg, info):
    """VPD in kPa declared hPa (or hPa declared kPa); a file without VPD gets one in kPa
    computed from its RH and air temperature, declared hPa."""
    out, cfg = frame.copy(), copy.deepcopy(cfg)
    if "vpd" not in frame:
        out["vpd"] = es_kpa(frame["tair"]) * (1 - frame["rh"] / 100)
        cfg["columns"]["vpd"] = '"vpd_col"'
        cfg["units"]["vpd"] = '"hPa"'
    else:
        cfg["units"]["vpd"] = '"kPa"' if "hPa" in cfg["units"]["vpd"] else '"hPa"'
    return out, cfg


def _rg(frame):
    return frame["rg"] if "rg" in frame else frame["ppfd"] / 2.1


def _as_rg(values):
    def apply(frame, cfg, info):
        out = frame.drop(columns=[c for c in ("rg", "ppfd") if c in frame])
        out["rg"] = values(frame)
        cfg = copy.deepcopy(cfg)
        cfg["columns"].pop("ppfd", None)
        cfg["columns"]["rg"] = '"rg_col"'
        return out, cfg
    return apply


def net_radiation(frame):
    """Net radiation of a vegetated surface: about 0.62 Rg minus a net long-wave loss of
    some 40-70 W m-2 by night (common practice (m))."""
    rg = _rg(frame)
    return 0.62 * rg - 55.0 + 15.0 * np.clip(rg / 800.0, 0.0, 1.0)


def water_flux(frame, info):
    """H2O flux in mmol m-2 s-1: evaporation of about 0.4 Rg over 44 kJ mol-1."""
    rng = np.random.default_rng(4)
    rg = _rg(frame).fillna(0.0).clip(lower=0.0)
    water = 0.4 * rg / 44.0 + 0.05 + rng.normal(0.0, 0.2, len(rg))
    return water.where(frame["nee"].notna())


def filled_elsewhere(frame, cfg, info):
    """NEE gap-filled by another tool (each gap the mean of the same time of day over
    7 days either side) delivered as measured, its flag all 0."""
    out = frame.copy()
    nee = frame["nee"].where(frame["qc"] == 0)
    stamps = _stamps(frame)
    slot = stamps.hour * 60 + stamps.minute
    filled = nee.copy()
    for minute in np.unique(slot):
        at = slot == minute
        series = nee[at]
        mean = series.rolling(15, center=True, min_periods=1).mean()
        filled[at] = series.fillna(mean).to_numpy()
    out["nee"] = filled.interpolate(limit_direction="both")
    out["qc"] = 0.0
    return out, cfg


def flag_inverted(frame, cfg, info):
    out = frame.copy()
    out["qc"] = 2.0 - frame["qc"]
    return out, cfg


def flag_unmapped(frame, cfg, info):
    cfg = copy.deepcopy(cfg)
    cfg["columns"].pop("nee_flag")
    return frame, cfg


def wind_as_ustar(frame, info):
    """The wind speed: u* = k U / ln((z - d) / z0) (logarithmic profile), U about 5-10
    times u* (short canopy z/z0 about 100-300 at a 3 m sonic; k = 0.4)."""
    rng = np.random.default_rng(7)
    ratio = 7.5 * np.exp(rng.normal(0.0, 0.15, len(frame)))
    return frame["ustar"] * ratio


def another_seed_nee(frame, cfg, info):
    """NEE of another site-year of the same generator (seed + 1) beside this weather."""
    other, _ = info["module"].generate(info["spec"], info["seed"] + 1)
    out = frame.copy()
    out["nee"] = other["nee"].reindex(frame.index).to_numpy()
    out["qc"] = np.where(out["nee"].notna(), 0.0, np.nan)
    return out, cfg


def _two_years(frame, cfg, info, overlap):
    """This site-year followed by the next one (seed + 1, stamps a year on), the second
    file starting a month early: ``"same"`` its first month a copy of the first file's
    last month, ``"other"`` that month with the second run's own values."""
    other, _ = info["module"].generate(info["spec"], info["seed"] + 1)
    other = other[[c for c in frame.columns if c in other]].copy()
    other["qc"] = np.where(other["nee"].notna(), 0.0, np.nan)
    other.index = _stamps(other) + pd.DateOffset(years=1)
    other = other[~other.index.duplicated()]        # 29 February a year on: 28 February
    last = _stamps(frame)[-1]
    month = _stamps(frame) > last - pd.DateOffset(months=1)
    if overlap == "none":
        return pd.concat([frame, other]), cfg
    if overlap == "same":
        head = frame.loc[month]
    else:
        head = info["module"].generate(info["spec"], info["seed"] + 2)[0]
        head = head[[c for c in frame.columns if c in head]].copy()
        head["qc"] = np.where(head["nee"].notna(), 0.0, np.nan)
        head = head.reindex(frame.index[month])
    return pd.concat([frame, head, other]), cfg


def step_gain(frame, info, factor=1.5):
    return frame["nee"].where(~_from_july(frame), frame["nee"] * factor)


# name -> edit(frame, cfg, info) -> (frame, cfg); ``info`` holds the site's facts
MISTAKES = {
    # the clock and the site
    "stamps local with daylight saving": local_daylight_saving,
    "stamps in UTC, utc_offset local": stamps_utc,
    "interval end read as start (marks flipped)": _cfg(marks_flipped),
    "utc_offset sign wrong": _cfg(lambda c, i: c["site"].update(utc_offset=-i["utc"])),
    "utc_offset 0 for local stamps": _cfg(lambda c, i: c["site"].update(utc_offset=0.0)),
    "longitude sign wrong": _cfg(lambda c, i: c["site"].update(longitude=-i["lon"])),
    "latitude sign wrong": _cfg(lambda c, i: c["site"].update(latitude=-i["lat"])),
    "latitude and longitude swapped": _cfg(lambda c, i: c["site"].update(
        latitude=i["lon"] if abs(i["lon"]) <= 90 else i["lon"] / 2, longitude=i["lat"])),
    "canopy written the other way": _cfg(lambda c, i: c["site"].update(
        canopy='"short"' if "tall" in c["site"]["canopy"] else '"tall"')),
    # temperatures
    "tair in K": _col(lambda f, i: f["tair"] + 273.15, "tair"),
    "tair in degF": _col(lambda f, i: f["tair"] * 1.8 + 32, "tair"),
    "tsoil of a 50 cm probe labelled 5 cm": _col(soil_at_50cm, "tsoil"),
    "tair and tsoil exchanged": _col(lambda f, i: f["tsoil"], "tair"),
    "sonic temperature as tair": _col(sonic_tair, "tair"),
    # humidity
    "RH given where VPD is expected": rh_as_vpd,
    "VPD unit kPa/hPa mixed up": vpd_wrong_unit,
    "RH as a fraction": _col(lambda f, i: f["rh"] / 100, "rh"),
    # radiation
    "PAR in umol mapped as Rg": _as_rg(lambda f: _rg(f) * 2.1),
    "net radiation mapped as Rg": _as_rg(net_radiation),
    "Rg in kW m-2": _as_rg(lambda f: _rg(f) / 1000),
    "Rg shifted by one record": _as_rg(lambda f: _rg(f).shift(1)),
    # NEE
    "NEE sign flipped from July": _col(lambda f, i: f["nee"].where(~_from_july(f), -f["nee"]),
                                       "nee"),
    "NEE sign flipped (NEP)": _col(lambda f, i: -f["nee"], "nee"),
    "NEE in mg CO2 m-2 s-1": _col(lambda f, i: f["nee"] * 0.044, "nee"),
    "H2O flux mapped as NEE": _col(water_flux, "nee"),
    "NEE gap-filled by another tool": filled_elsewhere,
    "NEE shifted by one record": _col(lambda f, i: f["nee"].shift(1), "nee"),
    "NEE gain x1.15 (spectral correction twice)": _col(lambda f, i: f["nee"] * 1.15, "nee"),
    "NEE gain x1.5 from July (span gas)": _col(step_gain, "nee"),
    "NEE of another year beside this weather": another_seed_nee,
    # u*
    "ustar x0.6 (sonic in the roughness sublayer)": _col(lambda f, i: f["ustar"] * 0.6,
                                                         "ustar"),
    "ustar x1.4 (sonic height written wrong)": _col(lambda f, i: f["ustar"] * 1.4, "ustar"),
    "wind speed mapped as ustar": _col(wind_as_ustar, "ustar"),
    "ustar in cm s-1": _col(lambda f, i: f["ustar"] * 100, "ustar"),
    # the flag and the files
    "quality flag inverted": flag_inverted,
    "quality flag not mapped": flag_unmapped,
    "two years, the overlap month kept twice (same values)":
        lambda f, c, i: _two_years(f, c, i, "same"),
    "two years, the overlap month of another download":
        lambda f, c, i: _two_years(f, c, i, "other"),
}
TWO_YEARS = "two years, no overlap (clean)"


def moves(annual, base) -> tuple[str, dict]:
    """Per flux, the move of each year's sum in sigma of the clean run (the largest)."""
    sigma = {}
    for flux in SUMS:
        worst = 0.0
        for year, row in annual.iterrows():
            if year not in base.index:
                continue
            ref = base.loc[year]
            value = (row[flux] - ref[flux]) / ref[f"{flux}_uncertainty_total"]
            if np.isfinite(value) and abs(value) > abs(worst):
                worst = float(value)
            elif not np.isfinite(value):
                worst = float("nan")
        sigma[flux] = worst
    text = ", ".join(f"{f} {sigma[f]:+.1f}σ" for f in SUMS)
    return text, sigma


def _form(warning: str) -> str:
    """A warning with its numbers and dates taken out: the clean run's warning of the
    same check with other figures (a statistic, a date) is not a new one."""
    return re.sub(r"[-+]?\d[\d.,:]*", "#", warning)[:200]


def _year_index(annual):
    table = annual.copy()
    key = "year" if "year" in table.columns else table.columns[0]
    return table.set_index(key)


GENERATORS = ("probe_clean_sites", "probe_clean_sites_third", "probe_clean_sites_fourth",
              "probe_clean_sites_fifth", "probe_clean_sites_sixth",
              "probe_clean_sites_seventh", "probe_clean_sites_weather")


def soil_depth_scan(seeds) -> None:
    """False alarms and power of :func:`fluxpart.soil_depth.deep_soil_probe` on every
    site-year of the seven clean generators (as generated, and with the 50 cm probe of
    :func:`soil_at_50cm` in place of the soil): counts and the smallest clean ratio."""
    from fluxpart.soil_depth import daily_range_ratio, deep_soil_probe
    counts = {"site-years": 0, "judged": 0, "named": 0, "judged 50 cm": 0, "named 50 cm": 0}
    smallest = np.inf
    for module_name in GENERATORS:
        module = importlib.import_module(module_name)
        for spec in module.SITES:
            for seed in seeds:
                frame, _ = module.generate(spec, seed)
                if not {"tair", "tsoil"} <= set(frame.columns):
                    continue
                counts["site-years"] += 1
                for soil, key in ((frame["tsoil"], ""), (soil_at_50cm(frame, {}), " 50 cm")):
                    found = daily_range_ratio(frame["tair"], soil, frame.index)
                    if found is None:
                        continue
                    counts["judged" + key] += 1
                    named = deep_soil_probe(frame["tair"], soil, frame.index) is not None
                    counts["named" + key] += named
                    if not key:
                        smallest = min(smallest, found[0])
                        if named:
                            print(f"false alarm: {module_name} {spec[0]} seed {seed} "
                                  f"ratio {found[0]:.3f}")
    print(", ".join(f"{k} {v}" for k, v in counts.items())
          + f"; smallest clean ratio {smallest:.3f}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", default="", help="site names, comma separated")
    parser.add_argument("--only", nargs="*", default=None, help="mistakes whose name holds")
    parser.add_argument("--csv", default="")
    parser.add_argument("--soil-scan", default="", help="seeds, comma separated: the deep "
                        "soil check's false alarms on the clean generators, nothing else")
    args = parser.parse_args(argv)
    if args.soil_scan:
        soil_depth_scan([int(seed) for seed in args.soil_scan.split(",")])
        return 0
    chosen = [s for s in SITES if not args.sites or s[1] in args.sites.split(",")]
    rows = []
    for module_name, name in chosen:
        frame, cfg, info = clean_site(module_name, name)
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            annual, error, clean_warnings = run(frame, cfg, folder)
            if error:
                print(f"{name} clean: REFUSED {error}")
                continue
            base = _year_index(annual)
            row0 = base.iloc[0]
            print(f"{name} ({module_name}) clean: " + ", ".join(
                f"{s} {row0[s]:.1f}±{row0[s + '_uncertainty_total']:.1f}" for s in SUMS)
                + f"; {len(clean_warnings)} warning(s)", flush=True)
            for w in clean_warnings:
                print(f"    clean - {w[:200]}")
            two_year_base = None
            for mistake, edit in MISTAKES.items():
                if args.only and not any(o in mistake for o in args.only):
                    continue
                new_frame, new_cfg = edit(frame, cfg, info)
                reference = base
                if mistake.startswith("two years"):
                    if two_year_base is None:
                        clean2, _ = _two_years(frame, cfg, info, "none")
                        out2 = run(clean2, cfg, folder)
                        two_year_base = (_year_index(out2[0]) if out2[0] is not None
                                         else None, out2[2])
                    reference = two_year_base[0]
                    known = set(two_year_base[1])
                else:
                    known = set(clean_warnings)
                annual, error, found = run(new_frame, new_cfg, folder)
                if error:
                    print(f"{name} {mistake}: REFUSED {error[:260]}", flush=True)
                    rows.append({"site": name, "mistake": mistake, "outcome": "refused",
                                 "message": error[:400]})
                    continue
                known_forms = {_form(w) for w in known}
                new = [w for w in found if _form(w) not in known_forms]
                text, sigma = moves(_year_index(annual), reference)
                outcome = "warned" if new else "silent"
                print(f"{name} {mistake}: {outcome.upper()} {text}", flush=True)
                for w in new:
                    print(f"    - {w[:260]}")
                rows.append({"site": name, "mistake": mistake, "outcome": outcome,
                             "message": " | ".join(w[:160] for w in new), **sigma})
    if args.csv:
        pd.DataFrame(rows).to_csv(args.csv, index=False)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
