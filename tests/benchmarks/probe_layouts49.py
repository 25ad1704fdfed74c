"""Probe: more files a tower really writes, not yet in probes 38-48 (round layouts49).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts49.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts48.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, a processing program or a person might: NEE in mmol m-2 s-1
or in micrograms of CO2, VPD in psi or in inches of mercury, soil temperature in kelvin beside
air in degrees Celsius, column names in German, Spanish and Chinese (UTF-8 and GB18030), a
date written with the Chinese year/month/day characters, quality flags as letters or on a
reversed scale, a leap second "23:59:60", records 29.99 minutes apart, a logger restart that
sets the clock back an hour, stamps of RFC 9557's extended form ("+01:00[Europe/Berlin]"),
a 10-minute meteorological file beside the half-hourly flux file, a year in two files whose
second adds a sensor's column or lacks the flag column, a file listed twice under two names,
a gzip of a semicolon file with decimal commas, a units line and a delimiter ending every
line, and page breaks (form feeds) with the header again on every page. Its truth is the
example's frame (values converted from the written unit compared to 1e-12 relative), or
``"refused"`` where the file cannot tell the intent (one ``error:`` line naming the cause is
due). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts
each class.
"""
import gzip
import os
import sys
import traceback
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts49-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts42 as p42  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, write  # noqa: E402

from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.io import read_site_config  # noqa: E402

CASES = {}

#: Molar mass of CO2 [g mol-1] from the IUPAC/CIAAW conventional atomic weights
#: C 12.011 and O 15.999 (m): 12.011 + 2 x 15.999.
CO2_GRAMS_PER_MOLE = 12.011 + 2 * 15.999
#: Pascals per pound-force per square inch and per conventional inch of mercury (0 °C):
#: NIST SP 811 (2008), appendix B.8 (m).
PA_PER_PSI = 6.894757e3
PA_PER_INHG = 3.386389e3


def case(function):
    CASES[function.__name__] = function
    return function


def rewritten(raw, column, factor, digits=9):
    """`column`'s present values divided by `factor` (the value in another unit), written
    to `digits` significant digits; -9999 kept."""
    out = raw[column].copy()
    present = out != "-9999"
    out[present] = [f"{v:.{digits}g}" for v in out[present].astype(float) / factor]
    return out


def close_truth(column, written, factor, offset=0.0):
    """The example's frame with `column` as `written` (text) times `factor` plus `offset`
    (the conversion a reference gives), compared to a relative 1e-12."""
    frame = p38.truth(None)
    values = pd.to_numeric(pd.Series(list(written)), errors="coerce").replace(-9999, np.nan)
    frame[column] = values.to_numpy() * factor + offset
    return ("close", frame)


def in_unit(folder, column, variable, unit, factor, declared=True, digits=9):
    """The example with `column` written in `unit` (`factor` of the canonical unit each),
    declared in [input.units] or not."""
    raw, _ = table()
    raw[column] = rewritten(raw, column, factor, digits)
    write(folder / "t.csv", lines(raw))
    units = {"vpd": "kPa"} | ({variable: unit} if declared else {})
    toml(folder, "t.csv", units=units)
    return raw[column]


# --------------------------------------------------------------------------- units
@case
def nee_in_millimoles_declared(folder):
    """NEE in mmol m-2 s-1 (a processing program's SI-prefixed output), declared."""
    written = in_unit(folder, "co2_net", "nee", "mmol m-2 s-1", 1000.0)
    return close_truth("nee", written, 1000.0)


@case
def nee_in_millimoles_undeclared(folder):
    """Twin: the same values read as µmol m-2 s-1: a thousandth of any NEE (refused)."""
    in_unit(folder, "co2_net", "nee", "mmol m-2 s-1", 1000.0, declared=False)
    return "refused"


@case
def nee_in_micrograms_of_co2_declared(folder):
    """NEE as a mass flux of CO2 in µg m-2 s-1 (1 µmol CO2 = 44.009 µg), declared."""
    factor = 1.0 / CO2_GRAMS_PER_MOLE
    written = in_unit(folder, "co2_net", "nee", "µg CO2 m-2 s-1", factor)
    return close_truth("nee", written, factor)


@case
def rg_in_kilowatts_declared(folder):
    """Global radiation in kW m-2 (a pyranometer's logger scaled by 1/1000), declared."""
    written = in_unit(folder, "sun_in", "rg", "kW m-2", 1000.0)
    return close_truth("rg", written, 1000.0)


def soil_in_kelvin(folder, units):
    """The example with its soil temperature written in kelvin, read with `units`."""
    raw, _ = table()
    present = raw["soil_c"] != "-9999"
    raw.loc[present, "soil_c"] = [f"{v + 273.15:.2f}" for v in
                                  raw.loc[present, "soil_c"].astype(float)]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", units=units)
    return raw["soil_c"]


@case
def soil_in_kelvin_beside_air_in_celsius_declared(folder):
    """Soil temperature in kelvin (a probe's raw output), air in °C, both declared."""
    written = soil_in_kelvin(folder, {"vpd": "kPa", "tair": "degC", "tsoil": "K"})
    return close_truth("tsoil", written, 1.0, -273.15)


@case
def soil_in_kelvin_beside_air_in_celsius_undeclared(folder):
    """Twin: soil temperature in kelvin not declared (no soil is at 280 °C; refused)."""
    soil_in_kelvin(folder, None)
    return "refused"


@case
def vpd_in_psi_declared(folder):
    """VPD in pounds-force per square inch (a North American greenhouse sensor), declared."""
    factor = PA_PER_PSI / 100.0 / 10.0          # psi -> hPa, written from kPa
    written = in_unit(folder, "dryness", "vpd", "psi", factor)
    return close_truth("vpd", written, PA_PER_PSI / 100.0)


@case
def vpd_in_inches_of_mercury_declared(folder):
    """VPD in inches of mercury (a weather station's pressure unit), declared."""
    factor = PA_PER_INHG / 100.0 / 10.0
    written = in_unit(folder, "dryness", "vpd", "inHg", factor)
    return close_truth("vpd", written, PA_PER_INHG / 100.0)


# --------------------------------------------------------------------------- names
GERMAN = ["Zeitstempel", "CO2_Fluss", "Globalstrahlung", "Lufttemperatur", "Sättigungsdefizit",
          "Schubspannungsgeschwindigkeit", "Bodentemperatur_5cm", "rel_Feuchte", "Güte_CO2"]
SPANISH = ["fecha_hora", "flujo_CO2", "radiación_global", "temperatura_aire",
           "déficit_presión_vapor", "velocidad_fricción", "temperatura_suelo",
           "humedad_relativa", "calidad_CO2"]
CHINESE = ["时间", "二氧化碳通量", "总辐射", "气温", "饱和水汽压差", "摩擦速度", "土壤温度",
           "相对湿度", "质量标记"]


def named(folder, names, written_in="utf-8", **inputs):
    """The example with its header in `names` (the config mapping them), in `written_in`."""
    raw, _ = table()
    raw.columns = names
    write(folder / "t.csv", lines(raw), encoding=written_in)
    toml(folder, "t.csv", columns=dict(zip(MAP, names[1:], strict=True)),
         time_column=names[0], **inputs)


@case
def names_in_german_utf8(folder):
    named(folder, GERMAN)


@case
def names_in_spanish_cp1252_declared(folder):
    named(folder, SPANISH, written_in="cp1252", encoding="cp1252")


@case
def names_in_chinese_utf8(folder):
    named(folder, CHINESE)


@case
def names_in_chinese_gb18030_declared(folder):
    """A Chinese-locale spreadsheet's CSV (GB18030, the national standard's encoding)."""
    named(folder, CHINESE, written_in="gb18030", encoding="gb18030")


@case
def names_in_chinese_gb18030_undeclared(folder):
    """Twin: no encoding declared: the names are no UTF-8 (refused naming the encoding)."""
    named(folder, CHINESE, written_in="gb18030")
    return "refused"


@case
def dates_written_with_chinese_year_month_day(folder):
    """ "2021年01月01日 00:30", the format writing the characters as literals."""
    p38.restamped(folder, "%Y年%m月%d日 %H:%M")


# --------------------------------------------------------------------------- flags
def lettered_flags(folder, letters, **inputs):
    """The example's flags 0, 1, 2 written as the grade `letters`."""
    raw, _ = table()
    raw["co2_grade"] = raw["co2_grade"].map(dict(zip("012", letters, strict=True)))
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


@case
def flag_letters_a_b_c_declared(folder):
    """Quality grades as letters (A best), flag_accept = ["A", "B"]."""
    lettered_flags(folder, "ABC", flag_accept=["A", "B"])


@case
def flag_letters_in_lower_case_declared_in_upper_case(folder):
    """Twin: the file writes "a", "b", "c", the config lists "A", "B": no record would be
    kept (refused naming the values the flags hold)."""
    lettered_flags(folder, "abc", flag_accept=["A", "B"])
    return "refused"


def reversed_flags(folder, **inputs):
    """The example's flags on the other scale: 2 good, 0 bad."""
    raw, _ = table()
    raw["co2_grade"] = raw["co2_grade"].map({"0": "2", "1": "1", "2": "0"})
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


@case
def flag_scale_reversed_two_good_declared(folder):
    """Flags 2 good, 0 bad (another convention), flag_accept = [2, 1]."""
    reversed_flags(folder, flag_accept=[2, 1])


@case
def flag_scale_reversed_two_good_undeclared(folder):
    """Twin: the default keeps flag 0 only, 25 of 17520 records (refused naming counts)."""
    reversed_flags(folder)
    return "refused"


# --------------------------------------------------------------------------- clocks
@case
def leap_second_written_at_the_end_of_june(folder):
    """A GPS-set logger writes the record ending at midnight of 30 June as "23:59:60"
    (a leap second's label, RFC 3339 section 5.6): the end of that day."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d %H:%M:%S")
    raw.loc[raw["stamp"] == "2021-07-01 00:00:00", "stamp"] = "2021-06-30 23:59:60"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")


@case
def records_of_29_99_minutes(folder):
    """A logger whose interval is 1799.4 s: 0.6 s a record, 2.9 hours by December; which
    half hour a record is cannot be told after the first weeks (refused)."""
    raw, ends = table()
    drift = pd.to_timedelta(np.arange(len(raw)) * -0.6, unit="s")
    raw["stamp"] = stamps(ends + drift, "%Y-%m-%d %H:%M:%S")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")
    return "refused"


@case
def logger_restart_sets_the_clock_back_an_hour(folder):
    """From 10 June 12:00 the stamps are an hour behind (a restart read a wrong clock):
    the hour before repeats with other values (refused naming the repeated stamps)."""
    raw, ends = table()
    later = (ends > "2021-06-10 12:00").to_numpy()
    shifted = ends.where(~later, ends - pd.Timedelta("1h"))
    raw["stamp"] = stamps(shifted, "%Y%m%d%H%M")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def stamps_with_an_offset_and_a_zone_in_brackets(folder):
    """RFC 9557 extended stamps "2021-07-01T00:30+02:00[Europe/Berlin]" (as Java's
    ZonedDateTime writes them): the offset places the record, the zone names it."""
    p38.restamped(folder, lambda ends: [s.strftime("%Y-%m-%dT%H:%M") + s.strftime("%z")[:3]
                                        + ":" + s.strftime("%z")[3:] + "[Europe/Berlin]"
                                        for s in p42.civil(ends)], "ISO8601")


@case
def stamps_with_an_offset_and_a_disagreeing_zone_in_brackets(folder):
    """Twin: "+01:00[Europe/Berlin]" all year: in summer the zone says +02:00 (refused)."""
    p38.restamped(folder, lambda ends: [s + "+01:00[Europe/Berlin]"
                                        for s in stamps(ends, "%Y-%m-%dT%H:%M")], "ISO8601")
    return "refused"


# --------------------------------------------------------------------------- several files
@case
def ten_minute_weather_file_beside_half_hourly_flux(folder):
    """A 10-minute meteorological file beside the half-hourly flux file: averaging it to
    half hours is the user's choice (refused naming both intervals)."""
    raw, ends = table()
    write(folder / "flux.csv", lines(raw[["stamp", "co2_net", "fric_vel", "co2_grade"]]))
    met = raw[["stamp", "sun_in", "air_c", "dryness", "soil_c", "humid"]]
    out = []
    for k in range(3):
        part = met.copy()
        part["stamp"] = (ends - (2 - k) * pd.Timedelta("10min")).dt.strftime("%Y%m%d%H%M")
        part["order"] = np.arange(len(raw)) * 3 + k
        out.append(part)
    write(folder / "met.csv", lines(pd.concat(out).sort_values("order").drop(columns="order")))
    toml(folder, ["flux.csv", "met.csv"])
    return "refused"


def halves(raw, ends):
    first = (ends <= "2021-07-01 00:00").to_numpy()
    return raw[first], raw[~first].copy()


@case
def year_in_two_files_the_second_adds_a_sensor_column(folder):
    """The second half-year's file holds a new unmapped column (a second soil probe)
    between the soil temperature and the humidity."""
    raw, ends = table()
    first, second = halves(raw, ends)
    second.insert(7, "soil_c_20cm", "7.5")
    write(folder / "a.csv", lines(first))
    write(folder / "b.csv", lines(second))
    toml(folder, ["a.csv", "b.csv"])


@case
def year_in_two_files_the_second_lacks_the_flag_column(folder):
    """The second file has no flag column: its records cannot be screened as the first's
    (refused naming the column and the file)."""
    raw, ends = table()
    first, second = halves(raw, ends)
    write(folder / "a.csv", lines(first))
    write(folder / "b.csv", lines(second.drop(columns="co2_grade")))
    toml(folder, ["a.csv", "b.csv"])
    return "refused"


@case
def one_file_listed_under_two_names(folder):
    """The list names the year's file and a link to it (same records twice, identical)."""
    raw, _ = table()
    write(folder / "t.csv", lines(raw))
    (folder / "copy.csv").symlink_to(folder / "t.csv")
    toml(folder, ["t.csv", "copy.csv"])


# --------------------------------------------------------------------------- lines
@case
def gzip_semicolons_decimal_commas_units_line_trailing_semicolons(folder):
    """A gzip of a semicolon file, decimal commas, a units line, ';' ending every line."""
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    text = lines(raw, sep=";")
    text.insert(1, ";".join(UNITS))
    write(folder / "t.csv.gz", [line + ";" for line in text],
          opener=lambda d: gzip.compress(d, mtime=0))
    toml(folder, "t.csv.gz", delimiter=";", decimal=",", rows_after_header=1)


@case
def page_breaks_with_the_header_on_every_page(folder):
    """A printed export: a form feed and the header again every 60 records."""
    raw, _ = table()
    text = lines(raw)
    out = [text[0]]
    for k, line in enumerate(text[1:]):
        if k and k % 60 == 0:
            out.append("\f" + text[0])
        out.append(line)
    write(folder / "t.csv", out)
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- judging
def close_state(folder, expected, cli, said):
    """`(state, detail)` of a reading whose values must be within 1e-12 of `expected`."""
    try:
        read, report = read_site_config(folder / "site.toml").read()
    except FluxpartError as error:
        state = ("refused", str(error).splitlines()[0])
    except Exception:        # noqa: BLE001 - a crash is what the probe looks for
        return "CRASH", traceback.format_exc().strip().splitlines()[-1]
    else:
        state = ("right", said(report))
        if not read.index.equals(expected.index):
            state = ("WRONG", f"stamps: {len(read)} records")
        for column in expected.columns:
            if column not in read.columns:
                continue
            a, b = read[column].to_numpy(float), expected[column].to_numpy(float)
            same = np.isclose(a, b, rtol=1e-12, atol=0) | (np.isnan(a) & np.isnan(b))
            if not same.all():
                at = np.flatnonzero(~same)[0]
                state = ("WRONG", f"{column}: {int((~same).sum())} differ, first "
                                  f"{a[at]} for {b[at]}")
                break
    return p38.commands_agree(state, folder, {}) if cli else state


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts43.judge``; a ``("close", frame)`` truth compared to 1e-12."""
    if name not in CASES or not callable(CASES[name]):
        return p43.judge(name, folder, base_tables, cli)
    function = CASES[name]
    try:
        expected = function(folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    if isinstance(expected, tuple) and expected[0] == "close":
        return close_state(folder, expected[1], cli, lambda report: (
            f"{len(report.warnings)} w: " + "; ".join(
                w.splitlines()[0][:70] for w in report.warnings)[:160]))
    p43.CASES[name] = lambda _folder, result=expected: result
    return p43.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
