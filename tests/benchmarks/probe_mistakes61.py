"""Probe: mistakes of a site's SETUP planted on clean site-years (round mistakes61): files
of several years or months given wrong, settings that do not fit the files, the clock's
zone, declared events, flag codes, a network's configs, a rerun's seed and an older
release's settings.

INVENTED DATA. Every site here is FICTIONAL: the clean site-years come from the clean-site
probes' own generators (``probe_clean_sites*.generate``) through
``probe_mistakes60.clean_site`` (one ordinary site-year of each of four generators written
apart, a site flag 0 good / 2 rejected on 5 % of the records). No number computed from
them describes a real ecosystem or supports any carbon claim.

Each mistake writes the site's files and config as a user's folder would hold them and
runs ``process_site_config`` (what ``run`` calls): REFUSED (its ``error:`` line), WARNED
(warnings the clean run of the same layout did not give) or SILENT, and how far the annual
NEE, GPP and Reco (both partitionings) moved in units of the clean run's stated 1 sigma
(the largest move over the years both runs budget). Cases of two years are judged against
the clean two-year run (this site-year and the generator's next one a year on). The
network cases run ``fluxpart batch`` on two of the sites (``--network``).

    OMP_NUM_THREADS=1 PYTHONPATH=$PWD nice -n 10 python tests/benchmarks/probe_mistakes61.py \
        [--sites a04,w11] [--only NAME ...] [--network] [--csv FILE]

About 5-10 s per run on one core (two-year runs twice that); 27 mistakes on 4 site-years
run some 20 min. Results of round mistakes61: DEVELOPERS.md's changelog.
"""
from __future__ import annotations

import argparse
import copy
import os
import subprocess
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from probe_mistakes60 import SUMS, _form, _year_index, clean_site, moves  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]

#: one ordinary site-year of each of four generators: temperate forest or grassland
#: (UTC+1, 30 min), boreal (UTC+2, 30 min), south-eastern US (UTC-5, 30 min), southern
#: Australia (UTC+9.5, 60 min)
SITES = [("probe_clean_sites", "a04"), ("probe_clean_sites_fourth", "f01"),
         ("probe_clean_sites_weather", "w11"), ("probe_clean_sites_seventh", "g15"),
         ("probe_clean_sites", "a10")]
#: a10, a cut grassland with declared events, runs by ``--sites a10`` (the events case)

#: the civil-time zone a logger at each standard offset keeps (the data's clock), a zone
#: of the same standard offset without summer time, and one whose summer time follows
#: other dates (None where the probe knows none). Zone names of the IANA tz database.
ZONES = {1.0: ("Europe/Berlin", "Africa/Lagos", None),
         2.0: ("Europe/Helsinki", "Africa/Johannesburg", "Africa/Cairo"),
         -5.0: ("America/New_York", "America/Panama", "America/Havana"),
         9.5: ("Australia/Adelaide", "Australia/Darwin", None)}


# --------------------------------------------------------------------------- writing
def _text(frame: pd.DataFrame) -> str:
    out = frame.rename(columns={c: f"{c}_col" for c in frame.columns})
    out.index = pd.DatetimeIndex(out.index).strftime("%Y-%m-%d %H:%M")
    out.index.name = "stamp"
    return out.to_csv(na_rep="-9999", float_format="%.6g")


def _value(value) -> str:
    if isinstance(value, str):
        return value
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    return repr(value)


def write(files: dict, cfg: dict, folder: Path, name: str = "site.toml") -> Path:
    """Write each frame of `files` (file name -> frame) and the config; return the config."""
    for file_name, frame in files.items():
        (folder / file_name).parent.mkdir(parents=True, exist_ok=True)
        (folder / file_name).write_text(_text(frame))
    lines = ["# FICTIONAL site (tests/benchmarks/probe_mistakes61.py)"]
    for table, head in (("site", "[site]"), ("input", "[input]"),
                        ("columns", "[input.columns]"), ("units", "[input.units]"),
                        ("processing", "[processing]")):
        if cfg.get(table):
            lines += ["", head] + [f"{k} = {_value(v)}" for k, v in cfg[table].items()]
    config = folder / name
    config.write_text("\n".join(lines) + "\n")
    return config


def run(files, cfg, folder: Path):
    """(annual table or None, error line or None, warnings, result)."""
    from fluxpart.errors import FluxpartError
    from fluxpart.pipeline import process_site_config
    config = write(files, cfg, folder)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = process_site_config(config)
    except FluxpartError as error:
        return None, str(error).splitlines()[0], (), None
    return (result.annual, None,
            tuple(dict.fromkeys(tuple(result.warnings) + tuple(str(w.message) for w in caught))),
            result)


# --------------------------------------------------------------------------- layouts
def _stamps(frame):
    return pd.DatetimeIndex(frame.index)


def _with_flag(frame):
    out = frame.copy()
    if "qc" not in out:
        out["qc"] = np.where(out["nee"].notna(), 0.0, np.nan)
    return out


def next_year(info, seed_step=1, spec=None):
    """The generator's next site-year (seed + `seed_step`) stamped a year on, as the
    frame of :func:`probe_mistakes60.clean_site` (a flag column, 0 where measured)."""
    other, _ = info["module"].generate(spec or info["spec"], info["seed"] + seed_step)
    # this site's columns (a generator may measure PPFD one year and Rg the next)
    other = _with_flag(_as_columns(other, [c for c in info["columns"] if c != "qc"]))
    other.index = _stamps(other) + pd.DateOffset(years=1)
    return other[~other.index.duplicated()]


def _year_files(frame, second):
    y1, y2 = _stamps(frame)[0].year, _stamps(second)[0].year
    return {f"tower_{y1}.csv": frame, f"tower_{y2}.csv": second}


def _monthly(frame):
    stamps = _stamps(frame)
    return {f"tower_{key}.csv": part for key, part in
            frame.groupby(stamps.strftime("%Y-%m"), sort=True)}


def _glob_cfg(cfg, path='"tower_*.csv"'):
    cfg = copy.deepcopy(cfg)
    cfg["input"]["path"] = path
    return cfg


def two_years(frame, cfg, info):
    """The clean two-year layout: one file per year, a glob."""
    return _year_files(frame, next_year(info)), _glob_cfg(cfg), "two"


def two_years_reversed(frame, cfg, info):
    files = _year_files(frame, next_year(info))
    cfg = _glob_cfg(cfg, "[" + ", ".join(f'"{n}"' for n in reversed(list(files))) + "]")
    return files, cfg, "two"


def year_twice(frame, cfg, info):
    """The first year's file kept twice, under its name and a copy's."""
    files = _year_files(frame, next_year(info))
    first = next(iter(files))
    files[first.replace(".csv", " - Copy.csv")] = frame
    return files, _glob_cfg(cfg, '"tower_*.csv"'), "two"


def second_year_restamped(frame, cfg, info):
    """The second year's file is the first year's records stamped a year on (a file
    saved again under the next year's name, its dates bumped)."""
    copy_ = frame.copy()
    copy_.index = _stamps(frame) + pd.DateOffset(years=1)
    copy_ = copy_[~copy_.index.duplicated()]
    return _year_files(frame, copy_), _glob_cfg(cfg), "two"


def _other_site_spec(info):
    """Another site of the same generator and record interval, the nearest in degrees
    of latitude plus half those of longitude (its stamps are moved to this site's clock
    by :func:`_other_tower`)."""
    own = info["spec"]
    others = [s for s in info["module"].SITES if s[0] != own[0] and int(s[5]) == int(own[5])]
    others.sort(key=lambda s: abs(s[1] - own[1]) + abs(s[2] - own[2]) / 2)
    return others[0]


def _as_columns(other, columns):
    """`other` with this site's columns: Rg from PPFD (/ 2.1 µmol J-1, common practice
    (m)) or back where the towers measure different ones, absent ones missing."""
    out = pd.DataFrame(index=other.index)
    for column in columns:
        if column in other:
            out[column] = other[column]
        elif column == "ppfd" and "rg" in other:
            out[column] = other["rg"] * 2.1
        elif column == "rg" and "ppfd" in other:
            out[column] = other["ppfd"] / 2.1
        else:
            out[column] = np.nan
    return out


def _other_tower(info, seed, year):
    """The other tower's site-year (:func:`_other_site_spec`) stamped in this site's
    standard time and moved to `year` (its generator may write another year)."""
    spec = _other_site_spec(info)
    other, _ = info["module"].generate(spec, seed)
    other = other[[c for c in ("nee", "rg", "ppfd", "tair", "rh", "vpd", "ustar", "tsoil")
                   if c in other]]
    step = int(spec[5])
    hours = info["utc"] - float(spec[3])
    stamps = _stamps(other) + pd.Timedelta(minutes=round(hours * 60 / step) * step)
    other.index = stamps + pd.DateOffset(years=year - stamps[len(stamps) // 2].year)
    return _with_flag(other[~other.index.duplicated()])


def second_year_other_site(frame, cfg, info):
    """The second year's file is another tower's (the generator's nearest other site)."""
    other = _other_tower(info, info["seed"] + 1, _stamps(frame)[len(frame) // 2].year + 1)
    other = _as_columns(other.reindex(_stamps(next_year(info))), frame.columns)
    return _year_files(frame, other), _glob_cfg(cfg), "two"


def monthly(frame, cfg, info):
    return _monthly(frame), _glob_cfg(cfg), "one"


def month_of_other_site(frame, cfg, info):
    """Monthly files; June's is another tower's (same generator, its June)."""
    files = _monthly(frame)
    key = next(k for k in files if k.endswith("-06.csv"))
    stamps = _stamps(files[key])
    other = _other_tower(info, info["seed"], stamps[0].year)
    files[key] = _as_columns(other.reindex(stamps), files[key].columns)
    if files[key]["nee"].notna().sum() < 0.5 * files[key]["qc"].size:
        raise RuntimeError("the other tower's June holds no NEE at these stamps")
    return files, _glob_cfg(cfg), "one"


def month_twice(frame, cfg, info):
    files = _monthly(frame)
    key = next(k for k in files if k.endswith("-06.csv"))
    files[key.replace(".csv", "(1).csv")] = files[key]
    return files, _glob_cfg(cfg), "one"


def month_missing(frame, cfg, info):
    files = _monthly(frame)
    files.pop(next(k for k in files if k.endswith("-06.csv")))
    return files, _glob_cfg(cfg), "one"


def month_of_last_year(frame, cfg, info):
    """Monthly files; in June's place the June file of the year before (another
    site-year of the generator, stamped a year earlier)."""
    files = _monthly(frame)
    key = next(k for k in files if k.endswith("-06.csv"))
    stamps = _stamps(files.pop(key))
    earlier, _ = info["module"].generate(info["spec"], info["seed"] + 1)
    earlier = _with_flag(earlier[[c for c in frame.columns if c in earlier and c != "qc"]])
    earlier = earlier.reindex(stamps)
    earlier.index = stamps - pd.DateOffset(years=1)
    files[key.replace(str(stamps[0].year), str(stamps[0].year - 1))] = earlier
    return files, _glob_cfg(cfg), "one"


def month_hourly(frame, cfg, info):
    """Monthly files; June's from a logger writing hourly means (30-min sites) or its
    half-hours (60-min sites: each hour's record written twice, at :00 and :30)."""
    files = _monthly(frame)
    key = next(k for k in files if k.endswith("-06.csv"))
    part = files[key]
    stamps = _stamps(part)
    if info["step"] == 30:
        marks = cfg["input"]["time_marks"].strip('"')
        hour = stamps.floor("60min") if marks == "start" else stamps.ceil("60min")
        files[key] = part.groupby(hour).mean()
        files[key]["qc"] = np.where(files[key]["nee"].notna(), 0.0, np.nan)
    else:
        half = part.copy()
        half.index = stamps + pd.Timedelta(minutes=30)
        files[key] = pd.concat([part, half]).sort_index()
    return files, _glob_cfg(cfg), "one"


def filled_copy_in_glob(frame, cfg, info):
    """The glob also takes an earlier export of the same year whose NEE gaps were
    filled (linear interpolation) under the same column names."""
    filled = frame.copy()
    filled["nee"] = frame["nee"].where(frame["qc"] == 0).interpolate(limit_direction="both")
    filled["qc"] = 0.0
    files = {"tower.csv": frame, "tower_filled.csv": filled}
    return files, _glob_cfg(cfg, '"tower*.csv"'), "one"


# --------------------------------------------------------------------------- settings
def _setting(table, key, value):
    def apply(frame, cfg, info):
        cfg = copy.deepcopy(cfg)
        cfg[table][key] = value(cfg, info) if callable(value) else value
        return {"site.csv": frame}, cfg, "one"
    return apply


def _year_start_off(months):
    def value(cfg, info):
        start = cfg["processing"].get("year_start", '"01-01"').strip('"')
        month = (int(start[:2]) - 1 + months) % 12 + 1
        return f'"{month:02d}-01"'
    return value


def _other_interval(cfg, info):
    return 60 if info["step"] == 30 else 30


def _events_wrong_year(cfg, info):
    """Declared events a year off: the site's own events a year earlier; a site
    without events gets a harvest on 20 July of the year after its record, typed with
    the record's year (a spurious cut in the record)."""
    events = cfg["processing"].get("events")
    if events:
        dates = [e.strip(' "') for e in events.strip("[]").split(",")]
        return "[" + ", ".join(f'"{int(d[:4]) - 1}{d[4:]}"' for d in dates) + "]"
    return f'["{info["year"]}-07-20"]'


def flag_one_accepted(frame, cfg, info):
    """A flag of 0 good / 1 rejected read with ``flag_accept = [0, 1]`` (a 0/1/2 scheme's
    setting copied)."""
    out = frame.copy()
    out["qc"] = frame["qc"].where(frame["qc"] != 2, 1.0)
    cfg = copy.deepcopy(cfg)
    cfg["input"]["flag_accept"] = "[0, 1]"
    return {"site.csv": out}, cfg, "one"


def _zone_data(frame, info, zone):
    """The records stamped in `zone`'s civil time (summer records an hour later)."""
    stamps = _stamps(frame)
    utc = stamps - pd.Timedelta(hours=info["utc"])
    civil = utc.tz_localize("UTC").tz_convert(zone).tz_localize(None)
    out = frame.copy()
    out.index = civil
    return out[~out.index.duplicated()]


def zone_case(which):
    def apply(frame, cfg, info):
        own, plain, other = ZONES[info["utc"]]
        wrong = {"plain": plain, "other": other, "own": own}[which]
        if wrong is None:
            return None
        cfg = copy.deepcopy(cfg)
        cfg["input"]["time_zone"] = f'"{wrong}"'
        return {"site.csv": _zone_data(frame, info, own)}, cfg, "one"
    return apply


def summer_offset_with_zone(frame, cfg, info):
    own = ZONES[info["utc"]][0]
    cfg = copy.deepcopy(cfg)
    cfg["input"]["time_zone"] = f'"{own}"'
    cfg["site"]["utc_offset"] = info["utc"] + 1.0
    return {"site.csv": _zone_data(frame, info, own)}, cfg, "one"


def old_release_settings(frame, cfg, info):
    """A settings file of 0.32.0, which lacks ``driver_day_prior`` and computed as
    ``"night"``: the result that release wrote is this run's with "night"; the probe
    compares it with the run of today's default (what the old file now gives)."""
    cfg = copy.deepcopy(cfg)
    cfg["processing"]["driver_day_prior"] = '"night"'
    return {"site.csv": frame}, cfg, "one"


# name -> edit(frame, cfg, info) -> (files, cfg, baseline "one" | "two") or None (n/a)
MISTAKES = {
    # several years' files
    "two years' files listed in reverse order": two_years_reversed,
    "a year's file twice under two names (glob)": year_twice,
    "second year's file the first's, dates bumped a year": second_year_restamped,
    "second year's file of another tower": second_year_other_site,
    # monthly files
    "monthly files, June of another tower": month_of_other_site,
    "monthly files, June twice under two names": month_twice,
    "monthly files, June not copied": month_missing,
    "monthly files, last year's June in its place": month_of_last_year,
    "monthly files, June of another record interval": month_hourly,
    "glob takes a gap-filled export of the year too": filled_copy_in_glob,
    # settings that do not fit the files
    "year_start 6 months off the data's start": _setting("processing", "year_start",
                                                         _year_start_off(6)),
    "year_start 3 months off (a hydrological year)": _setting("processing", "year_start",
                                                              _year_start_off(3)),
    "interval_minutes of the other logger (30/60)": _setting("input", "interval_minutes",
                                                             _other_interval),
    "interval_minutes 15": _setting("input", "interval_minutes", 15),
    "[site] altitude in feet": _setting("site", "altitude", lambda c, i: round(
        i["spec"][4] / 0.3048)),
    "[site] canopy_height of the other canopy": _setting(
        "site", "canopy_height", lambda c, i: 0.3 if "tall" in c["site"]["canopy"] else 25),
    "events a year off": _setting("processing", "events", _events_wrong_year),
    "flag 0/1 read with flag_accept [0, 1]": flag_one_accepted,
    "flag_accept [0, 2] (every record kept)": _setting("input", "flag_accept", "[0, 2]"),
    "flag_accept [2] (the codes read backwards)": _setting("input", "flag_accept", "[2]"),
    # the clock's zone
    "time_zone as meant (civil-time file)": zone_case("own"),
    "time_zone without summer time (civil-time file)": zone_case("plain"),
    "time_zone of other summer-time dates": zone_case("other"),
    "utc_offset the summer's beside a right time_zone": summer_offset_with_zone,
    # reruns
    "rerun with another seed (1 for 0)": _setting("processing", "seed", 1),
    "settings of 0.32.0 (driver_day_prior absent)": old_release_settings,
    # the one [processing] key the project ever removed (structural_error, added and
    # reverted on the development line): an older settings file that holds it
    "settings key removed since (structural_error)": _setting("processing",
                                                              "structural_error", '"shared"'),
}


# --------------------------------------------------------------------------- special cases
def seed_omitted(frame, cfg, folder: Path) -> str:
    """A reproducibility run without ``seed``: two runs, is the seed recorded and are the
    tables the same?"""
    cfg = copy.deepcopy(cfg)
    cfg["processing"].pop("seed", None)
    outcomes = []
    for _ in range(2):
        annual, error, _, result = run({"site.csv": frame}, cfg, folder)
        if error:
            return f"REFUSED {error}"
        outcomes.append((annual, result))
    same = outcomes[0][0].equals(outcomes[1][0])
    recorded = getattr(outcomes[0][1].config, "seed", None)
    return f"seed recorded {recorded!r}; two runs' annual tables identical: {same}"


def _batch(root: Path):
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OMP_NUM_THREADS": "1"}
    done = subprocess.run([sys.executable, "-m", "fluxpart", "batch", "network.toml",
                           "--workers", "1"], cwd=root, env=env, capture_output=True,
                          text=True, check=False)
    annual = None
    folder = root / "out" / "network_annual"
    if done.returncode == 0 and folder.is_dir():
        annual = pd.read_parquet(folder).reset_index()
        annual["site"] = annual["site"].astype(str)
    return done.returncode, done.stdout + done.stderr, annual


def network_cases(pair, only) -> list[dict]:
    """Two sites in a batch (``[batch] sites`` a glob of their folders): clean, then
    each network mistake; moves of each site's annual NEE in its clean 1 sigma."""
    sites = [clean_site(m, n) for m, n in pair]
    names = [n for _, n in pair]

    def lay(root, edit=None):
        root.mkdir(parents=True)
        (root / "network.toml").write_text('[batch]\nsites = ["towers/*/*.toml"]\n'
                                           'out = "out"\n')
        cfgs = []
        for (_, cfg, _), name in zip(sites, names, strict=True):
            cfg = copy.deepcopy(cfg)
            cfg["site"]["name"] = f'"Mistakes61 {name} (fictional)"'
            cfg["input"]["path"] = f'"{name}.csv"'
            cfgs.append(cfg)
        if edit:
            edit(cfgs)
        for (frame, _, _), cfg, name in zip(sites, cfgs, names, strict=True):
            folder = root / "towers" / name
            folder.mkdir(parents=True)
            write({f"{name}.csv": frame}, cfg, folder, f"{name}.toml")

    def lat_lon(cfgs):
        cfgs[1]["site"]["latitude"] = cfgs[0]["site"]["latitude"]
        cfgs[1]["site"]["longitude"] = cfgs[0]["site"]["longitude"]

    def one_file(cfgs):
        cfgs[1]["input"]["path"] = f'"../{names[0]}/{names[0]}.csv"'

    def one_name(cfgs):
        cfgs[1]["site"]["name"] = cfgs[0]["site"]["name"]

    cases = {"network: [site] latitude/longitude of the other site": lat_lon,
             "network: two sites, one data file": one_file,
             "network: two sites, one [site] name": one_name}
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        lay(Path(tmp) / "clean")
        code, output, clean = _batch(Path(tmp) / "clean")
        if clean is None:
            print(f"network clean: exit {code} {output[-400:]}")
            return rows
        known = {_form(w) for w in output.splitlines() if w.startswith("warning:")}
        clean = clean.set_index("site")
        sigma = clean["nee_uncertainty_total"] if "nee_uncertainty_total" in clean else (
            (clean["nee_ci95_high"] - clean["nee_ci95_low"]) / (2 * 1.96))
        for case, edit in cases.items():
            if only and not any(o in case for o in only):
                continue
            root = Path(tmp) / case.replace(" ", "_").replace(":", "").replace("/", "_")
            lay(root, edit)
            code, output, annual = _batch(root)
            if code != 0:
                line = next((x for x in output.splitlines() if x.startswith("error:")),
                            output.strip().splitlines()[-1] if output.strip() else "")
                print(f"{case}: REFUSED (exit {code}) {line[:260]}", flush=True)
                rows.append({"site": "+".join(names), "mistake": case, "outcome": "refused",
                             "message": line[:400]})
                continue
            new = [w for w in output.splitlines()
                   if w.startswith("warning:") and _form(w) not in known]
            worst = 0.0
            for _, row in annual.iterrows():
                if row["site"] in clean.index:
                    base = clean.loc[row["site"]]
                    worst = max(worst, abs(row["nee"] - base["nee"]) / sigma[row["site"]])
            outcome = "warned" if new else "silent"
            print(f"{case}: {outcome.upper()}; sites {annual['site'].nunique()}; largest NEE "
                  f"move {worst:.1f}σ", flush=True)
            for w in new:
                print(f"    - {w[:260]}")
            rows.append({"site": "+".join(names), "mistake": case, "outcome": outcome,
                         "message": " | ".join(w[:160] for w in new), "nee": worst})
    return rows


def flag_scan(seeds) -> None:
    """False alarms of :func:`fluxpart.flag_reach.keeps_every_value` on every site-year of
    the seven clean generators (``probe_mistakes60.GENERATORS``): each given the flag of
    :func:`probe_mistakes60.clean_site` (0 good, 2 on 5 % of the measured records) read
    with ``flag_accept = [0]``, and a 0/1/2 flag (1 on a further 10 %) read with
    ``[0, 1]``, both right; then the power: the 0/2 flag read with ``[0, 2]``."""
    import importlib

    from probe_mistakes60 import GENERATORS

    from fluxpart.flag_reach import keeps_every_value
    counts = {"site-years": 0, "named [0] on 0/2": 0, "named [0, 1] on 0/1/2": 0,
              "named [0, 2] on 0/2": 0}
    for module_name in GENERATORS:
        module = importlib.import_module(module_name)
        for spec in module.SITES:
            for seed in seeds:
                frame, _ = module.generate(spec, seed)
                nee = frame["nee"].to_numpy()
                rng = np.random.default_rng([seed, 61, counts["site-years"]])
                draw = rng.random(len(nee))
                measured = np.isfinite(nee)
                two = np.where(measured, np.where(draw < 0.05, 2.0, 0.0), np.nan)
                three = np.where(measured & (draw >= 0.05) & (draw < 0.15), 1.0, two)
                counts["site-years"] += 1
                for flag, accept, key in ((two, (0,), "named [0] on 0/2"),
                                          (three, (0, 1), "named [0, 1] on 0/1/2"),
                                          (two, (0, 2), "named [0, 2] on 0/2")):
                    rejected = np.where(np.isfinite(flag), ~np.isin(flag, accept), np.nan)
                    named = keeps_every_value([flag], ["qc"], nee, rejected.astype(float),
                                              accept) is not None
                    counts[key] += named
    print(", ".join(f"{k} {v}" for k, v in counts.items()))


# --------------------------------------------------------------------------- main
def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", default="", help="site names, comma separated")
    parser.add_argument("--only", nargs="*", default=None, help="mistakes whose name holds")
    parser.add_argument("--network", action="store_true", help="the network cases only")
    parser.add_argument("--csv", default="")
    parser.add_argument("--flag-scan", default="", help="seeds, comma separated: the flag "
                        "check's false alarms on the clean generators, nothing else")
    args = parser.parse_args(argv)
    if args.flag_scan:
        flag_scan([int(seed) for seed in args.flag_scan.split(",")])
        return 0
    rows = []
    if args.network:
        rows += network_cases([("probe_clean_sites", "a04"),
                               ("probe_clean_sites_sixth", "x20")], args.only)
        if args.csv:
            pd.DataFrame(rows).to_csv(args.csv, index=False)
        return 0
    chosen = [s for s in SITES if (s[1] in args.sites.split(",") if args.sites
                                   else s[1] != "a10")]
    for module_name, name in chosen:
        frame, cfg, info = clean_site(module_name, name)
        info["year"] = _stamps(frame)[len(frame) // 2].year
        info["columns"] = list(frame.columns)
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            annual, error, clean_warnings, _ = run({"site.csv": frame}, cfg, folder)
            if error:
                print(f"{name} clean: REFUSED {error}")
                continue
            bases = {"one": (_year_index(annual), set(clean_warnings))}
            row0 = bases["one"][0].iloc[0]
            print(f"{name} ({module_name}) clean: " + ", ".join(
                f"{s} {row0[s]:.1f}±{row0[s + '_uncertainty_total']:.1f}" for s in SUMS)
                + f"; {len(clean_warnings)} warning(s)", flush=True)
            if not args.only or any("seed" in o for o in args.only):
                print(f"{name} seed omitted, run twice: "
                      f"{seed_omitted(frame, cfg, Path(tempfile.mkdtemp(dir=tmp)))}",
                      flush=True)
            for mistake, edit in MISTAKES.items():
                if args.only and not any(o in mistake for o in args.only):
                    continue
                planted = edit(frame, cfg, info)
                if planted is None:
                    print(f"{name} {mistake}: n/a", flush=True)
                    continue
                files, new_cfg, kind = planted
                if kind not in bases:
                    clean_files, clean_cfg, _ = two_years(frame, cfg, info)
                    sub = Path(tempfile.mkdtemp(dir=tmp))
                    out2 = run(clean_files, clean_cfg, sub)
                    bases["two"] = (_year_index(out2[0]) if out2[0] is not None else None,
                                    set(out2[2]))
                    print(f"{name} two years clean: "
                          + ("REFUSED " + out2[1] if out2[1] else f"{len(out2[2])} warning(s)"),
                          flush=True)
                reference, known = bases[kind]
                if reference is None:
                    print(f"{name} {mistake}: n/a (its clean layout was refused)", flush=True)
                    continue
                sub = Path(tempfile.mkdtemp(dir=tmp))
                annual, error, found, _ = run(files, new_cfg, sub)
                if error:
                    print(f"{name} {mistake}: REFUSED {error[:260]}", flush=True)
                    rows.append({"site": name, "mistake": mistake, "outcome": "refused",
                                 "message": error[:400]})
                    continue
                known_forms = {_form(w) for w in known}
                new = [w for w in found if _form(w) not in known_forms]
                table = _year_index(annual)
                if not set(table.index) & set(reference.index):
                    text, sigma = "no budget year in common with the clean run", {}
                else:
                    text, sigma = moves(table, reference)
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
