"""Probe: configuration and column-mapping mistakes planted on several clean site-years.

INVENTED DATA. The site-years are FICTIONAL, written by ``probe_clean_sites.py``
(``write_site``); no number here describes a real ecosystem or supports a carbon claim.

A matrix (round mistakes59): each mistake a user makes while writing a site's config
(a column's unit declared wrong or left undeclared by a common factor, a column mapped to
the wrong variable, the stamps' convention, the UTC offset, the position's signs, the
canopy, the NEE sign, the missing code, the interval) planted on each of a few clean
site-years of ``probe_clean_sites.SITES`` (30- and 60-minute, both hemispheres, forest,
grassland, crop). ``probe_settings_mistakes.py`` plants many of these on the grassland
example alone; this probe asks whether they are named on other sites too.

Each case runs ``fluxpart check`` in-process (exit code, the new problem lines against the
clean site's) and, where ``check`` names nothing new (or with ``--run-all``), the run
(``process_site_config``: refused, warned, silent) with the moves of the annual NEE, GPP and
Reco (both partitionings) in units of the clean run's stated 1 sigma.

Columns a mistake maps that a clean file lacks are derived in the copy of the file: PPFD
(Rg times 2.1 µmol J-1, ``variables.PPFD_PER_RG``), net radiation (0.65 Rg - 45 W m-2 with
a cloud-dependent night loss, a grass surface's common practice (m)), wind speed (u* / 0.1
to 0.2, log profile over short and tall canopies (m)), and the turbulent flux before its
storage term (night CO2 pooled below the sensor on calm nights and flushed in the morning's
first three hours, summing to zero each day).

    PYTHONPATH=$PWD python tests/benchmarks/probe_config_mistakes.py [--sites a04,a22]
        [--only TEXT ...] [--run-all] [--no-run] [--out DIR]

About 2 min a site with the runs of the silent cases on an idle machine.
"""
from __future__ import annotations

import argparse
import contextlib
import io
import re
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from probe_clean_sites import SITES, problems_of, write_site  # noqa: E402

#: forest (N, 30 min), crop (N, 30 min), crop (N, 60 min), forest (S, 30 min),
#: cut grassland (S, 60 min), cut grassland (N, 30 min), savanna (S, 30 min, UTC+9.5)
DEFAULT_SITES = ("a04", "a08", "a07", "a18", "a22", "a10", "a14")
SUMS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")
MISSING = -9999.0


# --- config text ---------------------------------------------------------------------------

def set_key(text: str, section: str, key: str, value: str) -> str:
    """Set ``key = value`` in ``[section]``, adding the key or the section."""
    if f"[{section}]\n" not in text:
        return text.rstrip("\n") + f"\n\n[{section}]\n{key} = {value}\n"
    head = text.index(f"[{section}]\n")
    end = text.find("\n[", head + 1)
    end = len(text) if end < 0 else end
    block = text[head:end]
    pattern = re.compile(rf"^{re.escape(key)}\s*=.*$", re.M)
    block = (pattern.sub(lambda _: f"{key} = {value}", block) if pattern.search(block)
             else block.rstrip("\n") + f"\n{key} = {value}\n")
    return text[:head] + block + text[end:]


def drop_key(text: str, section: str, key: str) -> str:
    head = text.index(f"[{section}]\n")
    end = text.find("\n[", head + 1)
    end = len(text) if end < 0 else end
    block = re.sub(rf"^{re.escape(key)}\s*=.*\n", "", text[head:end], flags=re.M)
    return text[:head] + block + text[end:]


def get_key(text: str, section: str, key: str) -> str | None:
    head = text.index(f"[{section}]\n")
    end = text.find("\n[", head + 1)
    found = re.search(rf"^{re.escape(key)}\s*=\s*(.*)$", text[head:end if end > 0 else None],
                      re.M)
    return found.group(1).strip() if found else None


# --- the file's columns ----------------------------------------------------------------------

def scaled(column: pd.Series, factor: float, offset: float = 0.0) -> pd.Series:
    """The column's values times ``factor`` plus ``offset``, the missing code kept."""
    return column.where(column == MISSING, column * factor + offset)


def derived_columns(frame: pd.DataFrame, spec) -> pd.DataFrame:
    """Columns a clean file lacks that a mistake maps: PPFD, net radiation, wind speed and
    the turbulent flux before its storage term (all from the file's own columns)."""
    frame = frame.copy()
    rng = np.random.default_rng(int(spec[0][1:]))
    rg = frame["glob_rad"].where(frame["glob_rad"] != MISSING)
    frame["ppfd_in"] = (rg * 2.1).round(1).fillna(MISSING)
    loss = 45.0 + 25.0 * rng.random(len(frame))
    frame["net_rad"] = (0.65 * rg - loss).round(1).fillna(MISSING)
    ustar = frame["u_fric"].where(frame["u_fric"] != MISSING)
    ratio = 0.1 if spec[6] not in ("evergreen", "deciduous") else 0.2
    wind = ustar / ratio * np.exp(rng.normal(0.0, 0.15, len(frame)))
    frame["wind_speed"] = wind.round(2).fillna(MISSING)
    nee = frame["co2_exch"].where(frame["co2_exch"] != MISSING)
    dark = (rg.fillna(0.0) < 5.0).to_numpy()
    calm = (ustar.fillna(0.0) < ustar.median()).to_numpy()
    per_day = 48 if spec[5] == 30 else 24
    store = np.zeros(len(frame))
    pooled = 0.0
    morning = 0
    for i in range(len(frame)):            # the probe's own small loop, not the product
        if dark[i]:
            if morning:
                pooled, morning = 0.0, 0
            if calm[i] and np.isfinite(nee.iat[i]) and nee.iat[i] > 0:
                store[i] = 0.5 * nee.iat[i]
                pooled += store[i]
        elif pooled > 0 or morning:
            left = per_day // 8 - morning
            if left > 0:
                store[i] = -pooled / (per_day // 8)
                morning += 1
            else:
                pooled, morning = 0.0, 0
    frame["co2_turb"] = (nee - store).round(3).fillna(MISSING)
    return frame


# --- the cases -------------------------------------------------------------------------------
# each: (frame, text, info) -> (frame, text); info: the site's spec and whether vpd is mapped

def unit_data(column: str, factor: float, offset: float = 0.0):
    """The column's values in another unit, none declared."""
    def edit(frame, text, info):
        frame = frame.copy()
        frame[column] = scaled(frame[column], factor, offset)
        return frame, text
    return edit


def unit_declared(variable: str, unit: str):
    """The config declares a unit the values are not in."""
    def edit(frame, text, info):
        return frame, set_key(text, "input.units", variable, f'"{unit}"')
    return edit


def mapped(variable: str, column: str, drop: str | None = None):
    def edit(frame, text, info):
        text = set_key(text, "input.columns", variable, f'"{column}"')
        if drop:
            text = drop_key(text, "input.columns", drop)
        return frame, text
    return edit


def site_number(key: str, change):
    def edit(frame, text, info):
        return frame, set_key(text, "site", key, str(change(float(get_key(text, "site", key)))))
    return edit


def vpd_in_kpa_declared_hpa(frame, text, info):
    if "vpd_hpa" not in frame:                      # no VPD column: RH's site
        return None
    frame = frame.copy()
    frame["vpd_hpa"] = scaled(frame["vpd_hpa"], 0.1)
    return frame, text


def vpd_in_pa_declared_hpa(frame, text, info):
    if "vpd_hpa" not in frame:
        return None
    frame = frame.copy()
    frame["vpd_hpa"] = scaled(frame["vpd_hpa"], 100.0)
    return frame, text


def vpd_declared_kpa(frame, text, info):
    if "vpd_hpa" not in frame:
        return None
    return frame, set_key(text, "input.units", "vpd", '"kPa"')


def rh_as_vpd(frame, text, info):
    """The RH column mapped as VPD (RH kept where mapped)."""
    text = set_key(text, "input.columns", "vpd", '"rel_hum"')
    return frame, drop_key(text, "input.units", "vpd") if "[input.units]" in text else text


def flipped_marks(frame, text, info):
    marks = get_key(text, "input", "time_marks").strip('"')
    return frame, set_key(text, "input", "time_marks", '"start"' if marks == "end" else '"end"')


def flipped_canopy(frame, text, info):
    canopy = get_key(text, "site", "canopy").strip('"')
    return frame, set_key(text, "site", "canopy", '"short"' if canopy == "tall" else '"tall"')


def missing_undeclared(frame, text, info):
    return frame, drop_key(text, "input", "missing")


def wrong_interval(frame, text, info):
    return frame, set_key(text, "input", "interval_minutes", "60" if info["step"] == 30 else "30")


def offset_whole_hours(frame, text, info):
    """A half-hour zone's offset written as the whole hour below (UTC+9.5 as 9)."""
    offset = float(get_key(text, "site", "utc_offset"))
    if offset == round(offset):
        return None
    return frame, set_key(text, "site", "utc_offset", str(float(np.floor(offset))))


def nee_sign(frame, text, info):
    frame = frame.copy()
    frame["co2_exch"] = scaled(frame["co2_exch"], -1.0)
    return frame, text


def nee_turbulent_only(frame, text, info):
    return frame, set_key(text, "input.columns", "nee", '"co2_turb"')


CASES = {
    # units: the file's values in another unit, nothing declared
    "nee in mg CO2 m-2 s-1, undeclared": unit_data("co2_exch", 0.044),
    "tair in K, undeclared": unit_data("t_air", 1.0, 273.15),
    "tair in degF, undeclared": unit_data("t_air", 1.8, 32.0),
    "tsoil in K, undeclared": unit_data("t_soil", 1.0, 273.15),
    "tsoil in degF, undeclared": unit_data("t_soil", 1.8, 32.0),
    "vpd in kPa, declared hPa": vpd_in_kpa_declared_hpa,
    "vpd in Pa, declared hPa": vpd_in_pa_declared_hpa,
    "rh as a fraction, undeclared": unit_data("rel_hum", 0.01),
    "rg in PPFD µmol m-2 s-1, undeclared": unit_data("glob_rad", 2.1),
    "ustar in cm s-1, undeclared": unit_data("u_fric", 100.0),
    # units: the config declares a unit the values are not in
    "nee declared mg CO2 (values µmol)": unit_declared("nee", "mg CO2 m-2 s-1"),
    "tair declared K (values °C)": unit_declared("tair", "K"),
    "tair declared degF (values °C)": unit_declared("tair", "degF"),
    "tsoil declared K (values °C)": unit_declared("tsoil", "K"),
    "vpd declared kPa (values hPa)": vpd_declared_kpa,
    "rh declared fraction (values %)": unit_declared("rh", "fraction"),
    "rg declared umol m-2 s-1 (values W m-2)": unit_declared("rg", "umol m-2 s-1"),
    "ustar declared cm s-1 (values m s-1)": unit_declared("ustar", "cm s-1"),
    # columns mapped to the wrong variable
    "tsoil column mapped as tair": mapped("tair", "t_soil"),
    "tair column mapped as tsoil": mapped("tsoil", "t_air"),
    "rh column mapped as vpd": rh_as_vpd,
    "net radiation mapped as rg": mapped("rg", "net_rad"),
    "ppfd column mapped as rg": mapped("rg", "ppfd_in"),
    "turbulent flux (no storage) mapped as nee": nee_turbulent_only,
    "wind speed mapped as ustar": mapped("ustar", "wind_speed"),
    # time, position, canopy, sign, missing code, interval
    "time_marks flipped (start/end)": flipped_marks,
    "utc_offset +1 h": site_number("utc_offset", lambda v: v + 1),
    "utc_offset -1 h": site_number("utc_offset", lambda v: v - 1),
    "utc_offset +0.5 h": site_number("utc_offset", lambda v: v + 0.5),
    "utc_offset of a half-hour zone as the whole hour": offset_whole_hours,
    "latitude sign flipped": site_number("latitude", lambda v: -v),
    "longitude sign flipped": site_number("longitude", lambda v: -v),
    "canopy flipped (short/tall)": flipped_canopy,
    "elevation 1000 m ([site] elevation, no such setting)": lambda f, t, i: (
        f, set_key(t, "site", "elevation", "1000")),
    "measurement_height 30 m ([site], no such setting)": lambda f, t, i: (
        f, set_key(t, "site", "measurement_height", "30")),
    "nee sign reversed (uptake positive)": nee_sign,
    "missing code not declared (-9999 as a number)": missing_undeclared,
    "interval_minutes wrong (30/60)": wrong_interval,
}


# --- running -------------------------------------------------------------------------------

def check(config: Path) -> tuple[int, list[str]]:
    """``fluxpart check`` in this process: its exit code and problem lines (or error)."""
    from fluxpart import cli
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = cli.main(["check", str(config)])
    found = problems_of(out.getvalue(), "check")
    errors = [line for line in err.getvalue().splitlines() if line.startswith("error:")]
    return code, found + errors[:1]


def run(config: Path):
    """``process_site_config``: (result, None, warnings) or (None, error line, ())."""
    from fluxpart.errors import FluxpartError
    from fluxpart.pipeline import process_site_config
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = process_site_config(config)
    except FluxpartError as error:
        return None, "error: " + str(error).splitlines()[0], ()
    return result, None, tuple(result.warnings) + tuple(str(w.message) for w in caught)


def moves(result, base) -> tuple[str, float]:
    """The annual sums' moves against the clean run's 1 sigma, and the largest |move|."""
    row = result.annual.iloc[0]
    parts, largest = [], 0.0
    for s in SUMS:
        sigma = (row[s] - base[s]) / base[s + "_uncertainty_total"]
        largest = max(largest, abs(sigma)) if np.isfinite(sigma) else np.inf
        parts.append(f"{s} {row[s] - base[s]:+.0f} ({sigma:+.1f}σ)")
    return ", ".join(parts), largest


def write_case(folder: Path, name: str, frame: pd.DataFrame, text: str) -> Path:
    csv = folder / f"{name}.csv"
    frame.to_csv(csv, index=False, float_format="%.6g")
    text = re.sub(r'^path = ".*"$', f'path = "{csv.name}"', text, flags=re.M)
    config = folder / f"{name}.toml"
    config.write_text(text)
    return config


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", default=",".join(DEFAULT_SITES))
    parser.add_argument("--only", nargs="*", default=None)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--out", default="/tmp/fluxpart-config-mistakes")
    parser.add_argument("--run-all", action="store_true", help="run the cases check names too")
    parser.add_argument("--no-run", action="store_true", help="check only")
    args = parser.parse_args(argv)
    folder = Path(args.out)
    folder.mkdir(parents=True, exist_ok=True)
    specs = [s for s in SITES if s[0] in args.sites.split(",")]
    tally = {}
    for spec in specs:
        site = spec[0]
        clean_config = write_site(spec, args.seed, folder)
        clean_text = clean_config.read_text()
        frame = pd.read_csv(folder / f"{site}.csv", dtype={"stamp": str})
        frame = derived_columns(frame, spec)
        info = {"spec": spec, "step": spec[5]}
        config = write_case(folder, f"{site}_clean", frame, clean_text)
        clean_code, clean_found = check(config)
        print(f"== {site} {spec[6]} lat {spec[1]} {spec[5]} min, "
              f"{get_key(clean_text, 'site', 'canopy')}: clean check exit {clean_code}, "
              f"{len(clean_found)} problem(s)", flush=True)
        for line in clean_found:
            print(f"    (clean) {line[:240]}")
        base = None
        if not args.no_run:
            result, error, clean_warnings = run(config)
            base = result.annual.iloc[0] if result is not None else None
            print("   clean run: " + (error or ", ".join(
                f"{s} {base[s]:.0f} (1σ {base[s + '_uncertainty_total']:.0f})" for s in SUMS)),
                flush=True)
        for number, (name, edit) in enumerate(CASES.items()):
            if args.only and not any(o in name for o in args.only):
                continue
            planted = edit(frame, clean_text, info)
            if planted is None:
                continue
            config = write_case(folder, f"{site}_{number:02d}", *planted)
            code, found = check(config)
            new = [line for line in found if line not in clean_found]
            verdict = ("REFUSED" if code == 2 else "NAMED" if new else "silent")
            line = f"{site} | {name} | check exit {code} {verdict}"
            largest = None
            if base is not None and (args.run_all or not new):
                result, error, found_run = run(config)
                if error:
                    line += f" | run {error[:200]}"
                else:
                    warned = [w for w in dict.fromkeys(found_run) if w not in clean_warnings]
                    text, largest = moves(result, base)
                    line += f" | run {'WARNED' if warned else 'silent'} max {largest:.1f}σ: {text}"
                    new += [f"(run) {w}" for w in warned]
            print(line, flush=True)
            for problem in new[:4]:
                print(f"    - {problem[:260]}")
            tally.setdefault(name, []).append((site, verdict, largest))
    print("\nsummary: mistake | sites named by check | silent sites (largest move in σ)")
    for name, rows in tally.items():
        named = sum(v != "silent" for _, v, _ in rows)
        silent = [f"{s} {m:.1f}σ" if m is not None else s for s, v, m in rows if v == "silent"]
        print(f"  {name} | {named}/{len(rows)} | {', '.join(silent) or '-'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
