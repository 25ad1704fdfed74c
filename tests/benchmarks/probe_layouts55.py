"""Probe: logger files as towers, tower software and data portals write them, not yet in
probes 38-54 (round layouts55).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts55.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). Helpers and judging as ``probe_layouts53.py``; none of the cases of probes
38-54 is repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, an export or a portal might: units rows in Unicode (superscript
minus signs, a Greek mu, "m²"), in hPa or kelvin over a config that says otherwise, of
columns the config does not map, a humidity fraction; 1e30 and a second code for no value;
ISO stamps in lower case or with an hours-only offset, a "Z" on the clock column, a stamp
cell of -9999, a title line stating where in the interval the stamps fall; a units row then
a sensor-heights row; decimal commas unquoted in a comma file; a remark column left off where
empty, quoted delimiters and tabs in remarks, numbers padded inside their quotes; a record
wrapped over two lines, two record kinds interleaved (half-hourly and daily); a Markdown
table, a JSON object of columns; placeholder records, a week sent again, a record sent again
with another value; headers written again in a semicolon file and quoted in a plain one;
download files overlapping by irregular spans, a zip a month, a gzip a day with a units row,
a wide file of 200 columns. Its truth is the example's frame, the example's frame with the
records the files lack missing, the reading of a folder holding the same records in one clean
file, or ``"refused"`` where the file cannot tell the intent (one ``error:`` line naming the
cause). A case whose truth is a frame may also be refused with a clear cause (``refused``,
not ``WRONG``). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last
line counts each class.
"""
import gzip
import io
import json
import os
import sys
import zipfile
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts55-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts53 as p53  # noqa: E402
from probe_layouts38 import UNITS, lines, stamps, table, toml, write  # noqa: E402
from probe_layouts50 import canonical, month_of  # noqa: E402

CASES = {}
ISO = "%Y-%m-%dT%H:%M:%S"


def case(function):
    CASES[function.__name__] = function
    return function


def with_units_row(folder, row, raw=None, sep=",", name="t.csv", ending="\n",
                   encoding="utf-8", **inputs):
    """The example (or `raw`) with a units row `row` under its names."""
    if raw is None:
        raw, _ = table()
    text = lines(raw, sep=sep)
    text.insert(1, sep.join(row))
    write(folder / name, text, ending=ending, encoding=encoding)
    toml(folder, name, rows_after_header=1, **inputs)


def declared_truth(folder, row, raw, units):
    """A folder beside `folder` holding the same file read with `units` declared: the
    truth of a file whose units row states its units (round unitsrow)."""
    clean = folder.parent / (folder.name + "_truth")
    clean.mkdir(exist_ok=True)
    with_units_row(clean, row, raw, units=units)
    return clean


def scaled(column, factor, digits):
    """`column`'s values times `factor` written with `digits` decimals (-9999 kept)."""
    return [v if v == "-9999" else f"{float(v) * factor:.{digits}f}" for v in column]


def restamped(folder, written, read, shift="0h", **inputs):
    raw, ends = table()
    ends = ends - pd.Timedelta(shift)
    raw["stamp"] = written(ends) if callable(written) else stamps(ends, written)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format=read, **inputs)


# --------------------------------------------------------------------------- units rows
@case
def units_row_with_superscript_minus_signs(folder):
    """A portal's units row in Unicode: "µmol m⁻² s⁻¹", "W m⁻²", "°C", "m s⁻¹"."""
    with_units_row(folder, ["-", "µmol m⁻² s⁻¹", "W m⁻²", "°C", "kPa", "m s⁻¹", "°C", "%",
                            "-"])


@case
def units_row_with_greek_mu_and_squared_signs(folder):
    """A Greek mu (U+03BC, not the micro sign) and "m²" with slashes."""
    with_units_row(folder, ["-", "μmol/m²/s", "W/m²", "°C", "kPa", "m/s", "°C", "%", "-"])


@case
def units_row_says_hpa_config_silent_values_hpa(folder):
    """VPD written in hPa under a units row saying so; the config states no VPD unit."""
    raw, _ = table()
    raw["dryness"] = scaled(raw["dryness"], 10, 3)
    units = list(UNITS)
    units[4] = "hPa"
    with_units_row(folder, units, raw, units={})
    clean = raw.copy()
    return canonical(folder, clean, units={"vpd": "hPa"})


@case
def units_row_kelvin_config_says_degc_values_kelvin(folder):
    """Air temperature in kelvin under a units row "K"; the config says degC: refused."""
    raw, _ = table()
    raw["air_c"] = scaled(raw["air_c"], 1, 2)
    raw["air_c"] = [v if v == "-9999" else f"{float(v) + 273.15:.2f}" for v in raw["air_c"]]
    units = list(UNITS)
    units[3] = "K"
    with_units_row(folder, units, raw, units={"vpd": "kPa", "tair": "degC"})
    return "refused"


@case
def units_row_says_energy_per_half_hour_for_rg(folder):
    """Rg written as MJ m-2 per half hour (a weather station's sum), units row "MJ m-2":
    read as W m-2 it is 1800/1e6 of the truth: converted (refused before round unitsrow)."""
    raw, _ = table()
    raw["sun_in"] = scaled(raw["sun_in"], 1800 / 1e6, 6)
    units = list(UNITS)
    units[2] = "MJ m-2"
    with_units_row(folder, units, raw)
    # read as the units row writes since round unitsrow: the truth is the file read with
    # the unit declared (the values carry the 6 decimals written, not the example's)
    return declared_truth(folder, units, raw, {"vpd": "kPa", "rg": "MJ m-2"})


@case
def units_row_of_unmapped_columns_in_hpa_and_kelvin(folder):
    """Air pressure in hPa and sonic temperature in K beside the mapped columns."""
    raw, _ = table()
    raw.insert(4, "press", "985.2")
    raw.insert(8, "t_sonic", "281.40")
    units = list(UNITS)
    units[4:4] = ["hPa"]
    units[8:8] = ["K"]
    with_units_row(folder, units, raw)


@case
def humidity_as_a_fraction_units_row_says_1(folder):
    """RH written 0-1 under a units row "1": read converted to percent (refused before
    round unitsrow)."""
    raw, _ = table()
    raw["humid"] = scaled(raw["humid"], 0.01, 4)
    units = list(UNITS)
    units[7] = "1"
    with_units_row(folder, units, raw)
    return declared_truth(folder, units, raw, {"vpd": "kPa", "rh": "fraction"})


@case
def names_with_units_in_braces_mapped_without_them(folder):
    """Names "co2_net {umol m-2 s-1}" mapped as "co2_net"."""
    raw, _ = table()
    raw.columns = [n if u == "-" else f"{n} {{{u}}}" for n, u in
                   zip(raw.columns, UNITS, strict=True)]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


def units_row_says(folder, column, unit, factor, digits, key):
    """`column` written times `factor` under a units row naming `unit`, the config silent;
    the truth is the same file read with `unit` declared for `key`."""
    raw, _ = table()
    raw[column] = scaled(raw[column], factor, digits)
    row = list(UNITS)
    row[list(raw.columns).index(column)] = unit
    with_units_row(folder, row, raw, units={"vpd": "kPa"})
    clean = folder.parent / (folder.name + "_truth")
    clean.mkdir(exist_ok=True)
    with_units_row(clean, row, raw, units={"vpd": "kPa", key: unit})
    return clean


@case
def units_row_says_kw_per_m2_for_rg_config_silent(folder):
    return units_row_says(folder, "sun_in", "kW m-2", 0.001, 5, "rg")


@case
def units_row_says_cm_per_s_for_ustar_config_silent(folder):
    return units_row_says(folder, "fric_vel", "cm s-1", 100, 1, "ustar")


@case
def units_row_says_mg_co2_for_nee_config_silent(folder):
    return units_row_says(folder, "co2_net", "mg CO2 m-2 s-1", 0.04401, 6, "nee")


@case
def units_row_says_degf_for_soil_only_config_silent(folder):
    raw, _ = table()
    raw["soil_c"] = [v if v == "-9999" else f"{float(v) * 1.8 + 32:.2f}" for v in raw["soil_c"]]
    row = list(UNITS)
    row[6] = "degF"
    with_units_row(folder, row, raw)
    clean = folder.parent / (folder.name + "_truth")
    clean.mkdir(exist_ok=True)
    with_units_row(clean, row, raw, units={"vpd": "kPa", "tsoil": "degF"})
    return clean


@case
def one_month_file_writes_vpd_in_hpa_its_units_row_says_so(folder):
    """June's file (a logger swapped for a month) writes VPD in hPa, its units row says
    so; the config says kPa: refused, or June read in hPa."""
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        part = raw[month == m].copy()
        row = list(UNITS)
        if m == 6:
            part["dryness"] = scaled(part["dryness"], 10, 3)
            row[4] = "hPa"
        text = lines(part)
        text.insert(1, ",".join(row))
        write(folder / f"q_{m:02d}.csv", text)
    toml(folder, "q_*.csv", rows_after_header=1)


def month_files_with_a_title(folder, title, june_title, june_shift, **inputs):
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        part = raw[month == m].copy()
        if m == 6:
            part["stamp"] = stamps(ends[month == m] - pd.Timedelta(june_shift), "%Y%m%d%H%M")
        write(folder / f"q_{m:02d}.csv", [june_title if m == 6 else title] + lines(part))
    toml(folder, "q_*.csv", rows_before_header=1, **inputs)


@case
def one_month_file_in_utc_its_title_says_so(folder):
    """Month files titled "time zone: UTC+01:00"; June's (a replacement logger) titled
    "time zone: UTC", stamped an hour earlier: refused, or read converted."""
    month_files_with_a_title(folder, "Quillmoor tower; time zone: UTC+01:00",
                             "Quillmoor tower; time zone: UTC", "1h")


@case
def one_month_file_stamped_at_the_start_its_title_says_so(folder):
    month_files_with_a_title(folder, "Quillmoor tower; stamps at the end of each interval",
                             "Quillmoor tower; stamps at the start of each interval", "30min")


def stamp_named(folder, name, shift, marks):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta(shift), "%Y%m%d%H%M")
    raw = raw.rename(columns={"stamp": name})
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column=name, time_marks=marks)


@case
def stamp_column_named_interval_start_config_says_end(folder):
    """Start stamps in a column named so; time_marks = "end": refused."""
    stamp_named(folder, "interval_start", "30min", "end")
    return "refused"


@case
def stamp_column_named_interval_end_config_says_start(folder):
    stamp_named(folder, "interval_end", "0min", "start")
    return "refused"


# --------------------------------------------------------------------------- no value
def no_value(folder, code, columns=None, **inputs):
    raw, _ = table()
    for column in columns or raw.columns[1:8]:
        raw[column] = raw[column].replace("-9999", code)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


@case
def one_e_30_for_no_value_undeclared(folder):
    no_value(folder, "1.0E+30", missing=[])


@case
def one_e_30_for_no_value_declared(folder):
    no_value(folder, "1.0E+30", missing=[1e30])


@case
def minus_6999_in_the_weather_minus_9999_in_the_flux_one_declared(folder):
    """Two loggers' codes in one joined file; only -9999 declared."""
    no_value(folder, "-6999", columns=["sun_in", "air_c", "dryness", "soil_c", "humid"])


@case
def two_undeclared_codes_in_the_weather_columns(folder):
    """-6999 and -7999 (two loggers' codes) in turn where the weather is missing, only
    -9999 declared (the flux's code)."""
    raw, _ = table()
    for column in ["sun_in", "air_c", "dryness", "soil_c", "humid"]:
        at = np.flatnonzero(raw[column].to_numpy() == "-9999")
        raw.iloc[at, raw.columns.get_loc(column)] = np.where(np.arange(at.size) % 3 == 0,
                                                              "-7999", "-6999")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- stamps
@case
def iso_stamps_in_lower_case_t_and_z(folder):
    restamped(folder, "%Y-%m-%dt%H:%M:%Sz", "ISO8601", shift="1h")


@case
def iso_offset_written_as_hours_only(folder):
    restamped(folder, "%Y-%m-%dT%H:%M+01", "ISO8601")


@case
def date_and_clock_with_a_z_in_two_columns(folder):
    raw, ends = table()
    utc = ends - pd.Timedelta("1h")
    raw.insert(0, "clock_utc", stamps(utc, "%H:%M:%SZ"))
    raw.insert(0, "date_utc", stamps(utc, "%Y-%m-%d"))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["date_utc", "clock_utc"],
         time_format="%Y-%m-%d %H:%M:%SZ")


@case
def year_month_day_and_hhmm_four_columns(folder):
    raw, ends = table()
    for name, form in reversed({"yr": "%Y", "mo": "%m", "dy": "%d", "hhmm": "%H%M"}.items()):
        raw.insert(0, name, stamps(ends, form))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["yr", "mo", "dy", "hhmm"], time_format="%Y %m %d %H%M")


def stated_marks(folder, stated, written_shift, config_marks):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta(written_shift), "%Y-%m-%d %H:%M")
    text = [f"# time stamps mark the {stated} of each 30-minute averaging interval"] + lines(raw)
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_marks=config_marks,
         rows_before_header=1)


@case
def title_line_says_stamps_mark_the_start_config_says_end(folder):
    """Start stamps; the file's title line says so, the config says end: refused."""
    stated_marks(folder, "start", "30min", "end")
    return "refused"


@case
def title_line_says_stamps_mark_the_end_config_says_start(folder):
    """End stamps; the file's title line says so, the config says start: refused."""
    stated_marks(folder, "end", "0min", "start")
    return "refused"


@case
def title_line_says_stamps_mark_the_start_config_agrees(folder):
    stated_marks(folder, "start", "30min", "start")


@case
def stamps_padded_with_a_trailing_blank(folder):
    restamped(folder, lambda e: [s + " " for s in stamps(e, "%Y-%m-%d %H:%M")],
              "%Y-%m-%d %H:%M")


@case
def stamp_written_as_minus_9999_on_one_record(folder):
    """A logger that lost its clock for one record wrote the stamp cell as -9999."""
    raw, _ = table()
    raw.iloc[5000, 0] = "-9999"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return np.arange(len(raw)) == 5000


@case
def unix_seconds_in_a_semicolon_decimal_comma_file(folder):
    raw, ends = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    raw["stamp"] = [str(v) for v in (ends - pd.Timedelta("1h") - pd.Timestamp("1970-01-01"))
                    // pd.Timedelta("1s")]
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",",
         time_format="seconds since 1970-01-01 00:00:00 UTC")


@case
def hourly_records_with_iso_offset_stamps(folder):
    raw, ends = table()
    keep = (ends.dt.minute == 0).to_numpy()
    hourly = raw[keep].copy()
    clean = hourly.copy()
    hourly["stamp"] = stamps(ends[keep], "%Y-%m-%dT%H:%M:%S+01:00")
    write(folder / "t.csv", lines(hourly))
    toml(folder, "t.csv", time_format="ISO8601")
    return canonical(folder, clean)


@case
def start_stamps_with_a_gap_of_three_weeks(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta("30min"), "%Y-%m-%d %H:%M")
    gone = ((ends > "2021-06-03 12:00") & (ends <= "2021-06-24 12:00")).to_numpy()
    write(folder / "t.csv", lines(raw[~gone]))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_marks="start")
    return gone


@case
def a_few_records_of_the_next_year_at_the_end(folder):
    """The logger's year file holds the first six hours of the next year too."""
    raw, ends = table()
    extra = raw.iloc[:12].copy()
    extra["stamp"] = [(ends.iloc[-1] + pd.Timedelta(minutes=30 * k)).strftime("%Y%m%d%H%M")
                      for k in range(1, 13)]
    both = pd.concat([raw, extra])
    write(folder / "t.csv", lines(both))
    toml(folder, "t.csv")
    return canonical(folder, both)


# --------------------------------------------------------------------------- lines and fields
@case
def units_row_then_a_heights_row_declared(folder):
    raw, _ = table()
    text = lines(raw)
    text[1:1] = [",".join(UNITS), ",".join(["height", "3.1 m", "2.0 m", "2.0 m", "2.0 m",
                                            "3.1 m", "-0.05 m", "2.0 m", ""])]
    write(folder / "t.csv", text)
    toml(folder, "t.csv", rows_after_header=2)


@case
def units_row_then_a_heights_row_undeclared(folder):
    """Only the units row counted: the heights row is no record (refused, or skipped
    named)."""
    raw, _ = table()
    text = lines(raw)
    text[1:1] = [",".join(UNITS), ",".join(["height", "3.1", "2.0", "2.0", "2.0", "3.1",
                                            "-0.05", "2.0", ""])]
    write(folder / "t.csv", text)
    toml(folder, "t.csv", rows_after_header=1)


@case
def decimal_commas_unquoted_in_a_comma_file(folder):
    """A comma file whose values carry decimal commas, unquoted: cannot be split."""
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def optional_last_column_left_off_where_empty(folder):
    """A remark column last, its field (and delimiter) left off on records without one."""
    raw, _ = table()
    text = [lines(raw)[0] + ",remark"]
    for i, line in enumerate(lines(raw, header=False)):
        text.append(line + (",door opened" if i % 211 == 0 else ""))
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def remark_column_quoted_holding_semicolons_in_a_semicolon_file(folder):
    raw, _ = table()
    raw.insert(3, "remark", np.where(np.arange(len(raw)) % 150 == 0,
                                     '"cleaned; checked; ok"', ""))
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";")


@case
def tab_file_remark_quoted_holding_a_tab(folder):
    raw, _ = table()
    raw.insert(5, "remark", np.where(np.arange(len(raw)) % 150 == 0, '"fan\tok"', ""))
    write(folder / "t.txt", lines(raw, sep="\t"))
    toml(folder, "t.txt", delimiter="\t")


@case
def quoted_numbers_padded_inside_the_quotes(folder):
    raw, _ = table()
    text = [",".join(f'"{n}"' for n in raw.columns)]
    text += [",".join(f'"{v:>10}"' for v in row) for row in raw.itertuples(index=False)]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def every_record_wrapped_over_two_lines(folder):
    """An old terminal export wraps each record after its fifth field: refused."""
    raw, _ = table()
    text = [lines(raw)[0]]
    for row in raw.itertuples(index=False):
        text += [",".join(row[:5]), ",".join(row[5:])]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")
    return "refused"


@case
def two_record_kinds_interleaved_half_hourly_and_daily(folder):
    """An array logger's output: kind 101 a half-hourly record, kind 102 a daily line of
    three sums after each day's last record."""
    raw, ends = table()
    raw.insert(0, "kind", "101")
    text = [lines(raw)[0]]
    body = lines(raw, header=False)
    for i, line in enumerate(body):
        text.append(line)
        if ends.iloc[i].hour == 0 and ends.iloc[i].minute == 0:
            text.append(f"102,{ends.iloc[i]:%Y%m%d}0000,12.5,8.1,20.3")
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def markdown_pipe_table(folder):
    """A table pasted from a wiki: leading and trailing pipes, a line of dashes."""
    raw, _ = table()
    body = lines(raw, sep=" | ")
    text = ["| " + body[0] + " |", "|" + "|".join(["---"] * raw.shape[1]) + "|"]
    text += ["| " + line + " |" for line in body[1:]]
    write(folder / "t.md", text)
    toml(folder, "t.md", delimiter="|")


@case
def json_object_of_columns(folder):
    """A frame's to_json default: {column: {row: value}} (refused, or read as the table)."""
    raw, _ = table()
    data = {c: {str(i): v for i, v in enumerate(raw[c])} for c in raw.columns}
    (folder / "t.json").write_text(json.dumps(data))
    toml(folder, "t.json")


@case
def float32_artifacts_in_every_value(folder):
    """Values stored as single precision and written with 17 digits."""
    raw, _ = table()
    for column in raw.columns[1:8]:
        raw[column] = [v if v == "-9999" else repr(float(np.float32(v)))
                       for v in raw[column]]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return canonical(folder, raw)


@case
def wide_file_of_200_columns_with_statistic_siblings(folder):
    """Each variable with _max, _min, _std siblings beside it, and filler channels."""
    raw, _ = table()
    parts = [raw[["stamp"]]]
    for column in raw.columns[1:]:
        parts.append(raw[[column]])
        for stat in ("max", "min", "std"):
            parts.append(pd.DataFrame({f"{column}_{stat}": raw[column]}))
    wide = pd.concat(parts, axis=1)
    for k in range(200 - wide.shape[1]):
        wide[f"chan_{k:03d}"] = "0.0"
    write(folder / "t.csv", lines(wide))
    toml(folder, "t.csv")


@case
def sep_line_above_a_title_counted_as_one(folder):
    """A spreadsheet's "sep=;" line above a title; rows_before_header counts the title."""
    raw, _ = table()
    text = ["sep=;", "Quillmoor tower export"] + lines(raw, sep=";")
    write(folder / "t.csv", text)
    toml(folder, "t.csv", delimiter=";", rows_before_header=1)


@case
def utf8_bom_but_latin1_degree_in_the_units_row(folder):
    """A tool prepended a UTF-8 byte-order mark to a Latin-1 file ("°C" as one byte)."""
    raw, _ = table()
    text = lines(raw)
    text.insert(1, ",".join(u.replace("degC", "°C") for u in UNITS))
    data = ("\n".join(text) + "\n").encode("latin-1")
    (folder / "t.csv").write_bytes(b"\xef\xbb\xbf" + data)
    toml(folder, "t.csv", rows_after_header=1)


@case
def utf8_bom_but_latin1_degree_in_the_units_row_declared(folder):
    """As the case before, with encoding = "latin-1" (the refusal's own advice)."""
    utf8_bom_but_latin1_degree_in_the_units_row(folder)
    toml(folder, "t.csv", rows_after_header=1, encoding="latin-1")


@case
def bom_crlf_tab_file_trailing_tab_units_row(folder):
    raw, _ = table()
    text = lines(raw, sep="\t")
    text.insert(1, "\t".join(UNITS))
    write(folder / "t.txt", [line + "\t" for line in text], ending="\r\n",
          encoding="utf-8-sig")
    toml(folder, "t.txt", delimiter="\t", rows_after_header=1)


# --------------------------------------------------------------------------- records twice
@case
def a_record_of_no_values_then_the_same_stamp_filled(folder):
    """At five restarts the logger wrote a record of no values, then the real one."""
    raw, _ = table()
    text = lines(raw)
    for at in sorted([1000, 4000, 7000, 11000, 15000], reverse=True):
        cells = text[at + 1].split(",")
        text.insert(at + 1, ",".join([cells[0]] + ["-9999"] * 7 + [cells[8]]))
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def a_week_written_twice_later_in_the_file_same_values(folder):
    raw, _ = table()
    text = lines(raw)
    write(folder / "t.csv", text + text[3001:3337])
    toml(folder, "t.csv")


@case
def one_record_written_twice_apart_other_values(folder):
    """A May record sent again at the end of the file with another NEE: refused."""
    raw, _ = table()
    text = lines(raw)
    cells = text[6001].split(",")
    cells[1] = "3.141"
    write(folder / "t.csv", text + [",".join(cells)])
    toml(folder, "t.csv")
    return "refused"


@case
def restart_header_in_a_semicolon_decimal_comma_file(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    text = lines(raw, sep=";")
    for at in (14000, 9000, 2000):
        text.insert(at, text[0])
    write(folder / "t.csv", text, ending="\r\n")
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def restart_header_quoted_in_an_unquoted_file(folder):
    raw, _ = table()
    text = lines(raw)
    quoted = ",".join(f'"{n}"' for n in raw.columns)
    for at in (12000, 3000):
        text.insert(at, quoted)
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- several files
@case
def download_files_overlapping_by_irregular_spans(folder):
    """Files named by the download date, each holding all records since the download
    before it and 1-5 days more."""
    raw, ends = table()
    rng = np.random.default_rng(55)
    cuts = np.sort(rng.choice(np.arange(500, len(raw) - 500), 14, replace=False))
    starts = [0] + list(cuts)
    stops = list(cuts) + [len(raw)]
    for a, b in zip(starts, stops, strict=True):
        a = max(0, a - int(rng.integers(48, 240)))
        write(folder / f"dl_{ends.iloc[b - 1]:%Y%m%d}.csv", lines(raw.iloc[a:b]))
    toml(folder, "dl_*.csv")


@case
def month_zips_each_holding_one_file(folder):
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        buffer = io.BytesIO()
        with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
            archive.writestr(f"tower_2021_{m:02d}.csv", "\n".join(lines(raw[month == m])) + "\n")
        (folder / f"tower_2021_{m:02d}.zip").write_bytes(buffer.getvalue())
    toml(folder, "tower_2021_*.zip")


@case
def daily_gzip_files_each_with_a_units_row(folder):
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.strftime("%Y%m%d").to_numpy()
    for d in np.unique(day):
        text = lines(raw[day == d])
        text.insert(1, ",".join(UNITS))
        write(folder / f"day_{d}.csv.gz", text, opener=lambda b: gzip.compress(b, mtime=0))
    toml(folder, "day_*.csv.gz", rows_after_header=1)


def judge(name, folder, base_tables, cli):
    p53.CASES = CASES
    return p53.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
