"""Probe: logger files as a real eddy-covariance station or its data portal writes them.

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts38.py``
(``--dir DIR`` for the scratch folder, default a new temporary one; names of layouts to run
only those; ``--no-cli`` to read in process only). Round layouts38.

Each layout rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might write it, with column names of our own, plus a site
TOML as the README's "Your own site" describes, and then

1. reads it in process (``read_site_config(...).read()``) and compares the frame with the
   example's own reading value for value and stamp for stamp (a layout that drops records
   compares with the example's frame with those records missing);
2. runs ``fluxpart check`` and ``fluxpart run`` on it in a fresh process (a refusal is
   exit 2 with one ``error:`` line, or for ``check`` a problem marked "run stops" among
   those it lists, exit 1, as it reports unit and range refusals); where the frame
   is the example's, ``timeseries.parquet`` and ``annual.parquet`` must hold the example's
   run's values (their metadata name the site and config, which differ).

It prints one line a layout: ``right`` (every record and value as written), ``refused``
(exit 2 with one ``error:`` line; its text follows), ``WRONG`` (read, but a stamp or value
differs, or the run's table differs) or ``CRASH`` (another exception, a traceback, or
another exit status). The last line counts each class.
"""
import bz2
import gzip
import lzma
import os
import shutil
import subprocess
import sys
import tempfile
import traceback
from pathlib import Path

import numpy as np
import pandas as pd

TREE = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(TREE))
from fluxpart.errors import FluxpartError  # noqa: E402
from fluxpart.io import read_site_config  # noqa: E402

PY = sys.executable
ENV = dict(os.environ, PYTHONPATH=str(TREE), OMP_NUM_THREADS="1")
EXAMPLE = TREE / "examples" / "quillmoor_grassland.csv"
W = Path(sys.argv[sys.argv.index("--dir") + 1] if "--dir" in sys.argv
         else tempfile.mkdtemp(prefix="fluxpart-layouts38-"))

#: our own column names for the example's columns, in the example's order
NAMES = {"stamp_end": "stamp", "co2_exchange": "co2_net", "solar_down": "sun_in",
         "air_temp_c": "air_c", "vpd_kpa": "dryness", "friction_velocity": "fric_vel",
         "soil_temp_5cm": "soil_c", "rel_humidity": "humid", "qc_co2": "co2_grade"}
MAP = {"nee": "co2_net", "rg": "sun_in", "tair": "air_c", "vpd": "dryness",
       "ustar": "fric_vel", "tsoil": "soil_c", "rh": "humid", "nee_flag": "co2_grade"}
UNITS = ["-", "umol m-2 s-1", "W m-2", "degC", "kPa", "m s-1", "degC", "%", "-"]
LAYOUTS = {}


def layout(function):
    LAYOUTS[function.__name__] = function
    return function


def table():
    """The example's records as written (strings) and their end stamps."""
    raw = pd.read_csv(EXAMPLE, dtype=str, keep_default_na=False).rename(columns=NAMES)
    return raw, pd.to_datetime(raw["stamp"], format="%Y%m%d%H%M")


def lines(raw, sep=",", header=True):
    out = [sep.join(raw.columns)] if header else []
    out += [sep.join(row) for row in raw.itertuples(index=False)]
    return out


def write(path, text_lines, ending="\n", encoding="utf-8", opener=None):
    data = (ending.join(text_lines) + ending).encode(encoding)
    path.write_bytes(opener(data) if opener else data)


def toml(folder, path, *, columns=None, units=None, **inputs):
    """A site config as the README's "Your own site" gives it."""
    settings = {"path": path, "time_column": "stamp", "time_format": "%Y%m%d%H%M",
                "time_marks": "end", "missing": [-9999]} | inputs

    def value(v):
        if isinstance(v, str):
            return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
        if isinstance(v, (list, tuple)):
            return "[" + ", ".join(value(x) for x in v) + "]"
        return str(v)

    text = ["# Quillmoor is a FICTIONAL site (invented records).", "[site]",
            'name = "Quillmoor probe (fictional)"', "latitude = 49.3", "longitude = 10.2",
            "utc_offset = 1.0", 'canopy = "short"', "", "[input]"]
    text += [f"{k} = {value(v)}" for k, v in settings.items()]
    text += ["", "[input.columns]"]
    text += [f"{k} = {value(v)}" for k, v in (columns or MAP).items()]
    text += ["", "[input.units]"]
    text += [f"{k} = {value(v)}" for k, v in ({"vpd": "kPa"} if units is None
                                                 else units).items()]
    text += ["", "[processing]", "seed = 0", ""]
    (folder / "site.toml").write_text("\n".join(text), encoding="utf-8")


def stamps(ends, fmt):
    return list(ends.dt.strftime(fmt))


def serial_days(ends):
    """Spreadsheet day numbers (1900 date system), six decimals."""
    return [f"{v:.6f}" for v in (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")]


def unix_seconds(ends):
    return [str(v) for v in (ends - pd.Timestamp("1970-01-01")) // pd.Timedelta("1s")]


def restamped(folder, written, read=None, shift="0h", **inputs):
    """The example with its stamps written as `written` (a strftime format, or a function
    of the stamps) `shift` earlier, read as `read`."""
    raw, ends = table()
    ends = ends - pd.Timedelta(shift)
    raw["stamp"] = written(ends) if callable(written) else stamps(ends, written)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format=read or written, **inputs)


def split_stamps(folder, fields, time_format, cell=str, sep=",", name="t.csv", **inputs):
    """The example with its stamp written over columns (name -> strftime format), each
    cell as `cell` writes it."""
    raw, ends = table()
    for column, written in reversed(fields.items()):
        raw.insert(0, column, [cell(s) for s in stamps(ends, written)])
    write(folder / name, lines(raw.drop(columns="stamp"), sep=sep))
    toml(folder, name, time_column=list(fields), time_format=time_format, **inputs)


def named_with_units(folder, form, **inputs):
    """The example with each header name carrying its unit as `form` writes it."""
    raw, _ = table()

    def named(name, unit):
        return name if unit == "-" else form.format(name, unit)

    raw.columns = [named(n, u) for n, u in zip(raw.columns, UNITS, strict=True)]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", columns={k: named(v, u) for (k, v), u in
                                   zip(MAP.items(), UNITS[1:], strict=True)}, **inputs)


def overlapping_months(folder, before, after):
    """Month files, each with `before` records of the month before and `after` of the next."""
    raw, ends = table()
    month = (ends - pd.Timedelta("30min")).dt.month.to_numpy()
    for m in range(1, 13):
        rows = np.flatnonzero(month == m)
        rows = np.arange(max(rows[0] - before, 0), min(rows[-1] + 1 + after, len(raw)))
        write(folder / f"q_{m:02d}.csv", lines(raw.iloc[rows]))
    toml(folder, "q_*.csv")


def edited(folder, edit, ending="\n", **inputs):
    """The example's lines as `edit(text, raw)` changes them, read with `inputs`."""
    raw, _ = table()
    write(folder / "t.csv", edit(lines(raw), raw), ending=ending)
    toml(folder, "t.csv", **inputs)


def months(raw, ends):
    return [(month, raw[(ends - pd.Timedelta("30min")).dt.month == month])
            for month in range(1, 13)]


# --------------------------------------------------------------------------- layouts
# Each writes its files and site.toml into `folder`; it returns None (the example's frame
# is the truth) or a boolean array of the example's records the file does not hold.

@layout
def units_in_brackets(folder):
    named_with_units(folder, "{} [{}]")


@layout
def units_in_parentheses(folder):
    named_with_units(folder, "{} ({})")


@layout
def units_line_and_aggregation_line(folder):
    def edit(text, raw):
        text[1:1] = [",".join(UNITS), ",".join(["", "Avg", "Avg", "Avg", "Avg", "Avg", "Smp",
                                                "Avg", "Max"])]
        return text

    edited(folder, edit, rows_after_header=2)


@layout
def station_block_names_units_aggregation(folder):
    def edit(text, raw):
        text[0:0] = ["Station,Quillmoor T1 (fictional),Lat 49.3,Lon 10.2",
                     "Program,co2_half_hour_v3,Signature,40871", "Table,half_hour,,"]
        text[4:4] = [",".join(UNITS), ",".join(["TS", "Avg", "Avg", "Avg", "Avg", "Avg", "Smp",
                                                "Avg", "Max"])]
        return text

    edited(folder, edit, ending="\r\n", rows_before_header=3, rows_after_header=2)


@layout
def year_doy_hhmm_columns(folder):
    split_stamps(folder, {"yr": "%Y", "doy": "%j", "hhmm": "%H%M"}, "%Y %j %H%M")


@layout
def year_doy_hhmm_unpadded_doy(folder):
    split_stamps(folder, {"yr": "%Y", "doy": "%j", "hhmm": "%H%M"}, "%Y %j %H%M", cell=lambda s: str(int(s)), sep="\t",
                 name="t.txt", delimiter="\t")


@layout
def quoted_numbers(folder):
    raw, _ = table()
    write(folder / "t.csv", ['"' + '","'.join(row) + '"' for row in
                             [list(raw.columns)] + raw.values.tolist()])
    toml(folder, "t.csv")


@layout
def bom_semicolon_decimal_comma(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    write(folder / "t.csv", lines(raw, sep=";"), ending="\r\n", encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";", decimal=",")


@layout
def bom_semicolon_decimal_point(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw, sep=";"), encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";")


@layout
def tabs_mixed_with_spaces(folder):
    raw, _ = table()
    text = []
    for i, row in enumerate([list(raw.columns)] + raw.values.tolist()):
        seps = ["\t", "  ", " \t", "\t\t"]
        text.append(row[0] + "".join(seps[(i + j) % 4] + v for j, v in enumerate(row[1:])))
    write(folder / "t.dat", text)
    toml(folder, "t.dat", delimiter="whitespace")


@layout
def iso_stamps_with_seconds(folder):
    restamped(folder, "%Y-%m-%d %H:%M:%S")


@layout
def fractional_seconds(folder):
    restamped(folder, "%Y-%m-%dT%H:%M:%S.000", "%Y-%m-%dT%H:%M:%S.%f")


@layout
def fractional_seconds_jitter(folder):
    jitter = pd.to_timedelta(np.random.default_rng(38).integers(-900, 900, 17520),
                             unit="ms")
    restamped(folder, lambda ends: [s[:-3] for s in stamps(ends + jitter,
                                                           "%Y-%m-%d %H:%M:%S.%f")],
              "%Y-%m-%d %H:%M:%S.%f")


@layout
def twelve_hour_clock_day_first_seconds(folder):
    restamped(folder, "%d/%m/%Y %I:%M:%S %p")


@layout
def twelve_hour_clock_two_columns_unpadded(folder):
    raw, ends = table()
    raw.insert(0, "clock", [s.lstrip("0") for s in stamps(ends, "%I:%M %p")])
    raw.insert(0, "day", stamps(ends, "%Y-%m-%d"))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "clock"], time_format="%Y-%m-%d %I:%M %p")


@layout
def day_first_unpadded(folder):
    restamped(folder, lambda ends: [f"{t.day}/{t.month}/{t.year} {t.hour}:{t.minute:02d}"
                                    for t in ends], "%d/%m/%Y %H:%M")


@layout
def day_first_file_month_first_format(folder):
    restamped(folder, "%d/%m/%Y %H:%M", "%m/%d/%Y %H:%M")


@layout
def day_first_file_first_twelve_days_month_first_format(folder):
    """A file of the first 12 days of every month (a portal's extract): either order
    parses every stamp."""
    raw, ends = table()
    keep = (ends.dt.day <= 12) & ~((ends.dt.day == 1) & (ends.dt.hour == 0)
                                   & (ends.dt.minute == 0))
    raw["stamp"] = stamps(ends, "%d/%m/%Y %H:%M")
    write(folder / "t.csv", lines(raw[keep.to_numpy()]))
    toml(folder, "t.csv", time_format="%m/%d/%Y %H:%M")
    return ~keep.to_numpy()


@layout
def excel_serial_days(folder):
    restamped(folder, serial_days, "%Y-%m-%d %H:%M")


def mixed_missing_codes(folder, **inputs):
    """The example's -9999 cells written in turn as six spellings of no value."""
    raw, _ = table()
    codes = ["NaN", "-9999.0", "#N/A", "--", "", "NA"]
    for j, column in enumerate(raw.columns[1:8]):
        at = raw[column] == "-9999"
        raw.loc[at, column] = [codes[(i + j) % 6] for i in range(int(at.sum()))]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


@layout
def mixed_missing_codes_declared(folder):
    mixed_missing_codes(folder, missing=[-9999, "#N/A", "--", "NA"])


@layout
def mixed_missing_codes_undeclared(folder):
    mixed_missing_codes(folder)


@layout
def trailing_delimiter_on_records_only(folder):
    def edit(text, raw):
        text[1:] = [line + "," for line in text[1:]]
        return text

    edited(folder, edit)


@layout
def trailing_semicolon_every_line_crlf(folder):
    raw, _ = table()
    write(folder / "t.csv", [line + ";" for line in lines(raw, sep=";")], ending="\r\n")
    toml(folder, "t.csv", delimiter=";")


@layout
def footer_of_summary_lines(folder):
    raw, _ = table()
    text = lines(raw) + ["", "Records written,17520", "Logger program,co2_half_hour_v3",
                         "End of data"]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@layout
def footer_statistics_rows(folder):
    raw, _ = table()
    text = lines(raw) + ["mean," + ",".join(["0"] * 8), "max," + ",".join(["1"] * 8)]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@layout
def bzip2_file(folder):
    raw, _ = table()
    write(folder / "t.csv.bz2", lines(raw), opener=bz2.compress)
    toml(folder, "t.csv.bz2")


@layout
def xz_month_files_with_units_line(folder):
    raw, ends = table()
    for month, part in months(raw, ends):
        text = lines(part)
        text.insert(1, ",".join(UNITS))
        write(folder / f"m{month:02d}.csv.xz", text, opener=lzma.compress)
    toml(folder, "m*.csv.xz", rows_after_header=1)


@layout
def gzip_semicolon_bom_decimal_comma(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    write(folder / "t.csv.gz", lines(raw, sep=";"), ending="\r\n", encoding="utf-8-sig",
          opener=lambda d: gzip.compress(d, mtime=0))
    toml(folder, "t.csv.gz", delimiter=";", decimal=",")


@layout
def utf16_tab_export(folder):
    raw, _ = table()
    write(folder / "t.txt", lines(raw, sep="\t"), ending="\r\n", encoding="utf-16")
    toml(folder, "t.txt", delimiter="\t")


@layout
def utf16_big_endian_without_bom(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw), encoding="utf-16-be")
    toml(folder, "t.csv")


@layout
def month_files_overlapping_one_record(folder):
    overlapping_months(folder, 1, 1)


@layout
def month_files_overlapping_one_day(folder):
    overlapping_months(folder, 48, 0)


@layout
def month_files_column_order_changes(folder):
    raw, ends = table()
    rng = np.random.default_rng(7)
    for month, part in months(raw, ends):
        order = ["stamp"] + list(rng.permutation(part.columns[1:]))
        write(folder / f"x{month:02d}.csv", lines(part[order]))
    toml(folder, "x*.csv")


@layout
def month_files_named_by_month_word(folder):
    raw, ends = table()
    for month, part in months(raw, ends):
        name = pd.Timestamp(2021, month, 1).strftime("%b").lower()
        write(folder / f"tower_{name}.csv", lines(part))
    toml(folder, "tower_*.csv")


@layout
def month_files_one_gz_among_plain(folder):
    raw, ends = table()
    for month, part in months(raw, ends):
        if month == 7:
            write(folder / "r07.csv.gz", lines(part), opener=lambda d: gzip.compress(d, mtime=0))
        else:
            write(folder / f"r{month:02d}.csv", lines(part))
    toml(folder, "r*.csv*")


@layout
def month_file_empty_while_logger_down(folder):
    raw, ends = table()
    for month, part in months(raw, ends):
        write(folder / f"e{month:02d}.csv", lines(part.iloc[:0] if month == 4 else part))
    toml(folder, "e*.csv")
    return ((ends - pd.Timedelta("30min")).dt.month == 4).to_numpy()


@layout
def whole_days_without_lines(folder):
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.normalize()
    gone = (day.between("2021-03-03", "2021-03-05") | day.between("2021-08-10", "2021-08-19")
            ).to_numpy()
    write(folder / "t.csv", lines(raw[~gone]))
    toml(folder, "t.csv")
    return gone


@layout
def stamps_in_utc_with_zone_name(folder):
    restamped(folder, "%Y-%m-%d %H:%M UTC", "%Y-%m-%d %H:%M %Z", shift="1h")


@layout
def stamps_iso_offset_local_time(folder):
    restamped(folder, "%Y-%m-%dT%H:%M:%S+01:00", "ISO8601")


@layout
def non_ascii_column_names(folder):
    raw, _ = table()
    names = ["Zeitstempel", "CO₂-Austausch", "Globalstrahlung", "Lufttemperatur",
             "Sättigungsdefizit", "Schubspannungsgeschwindigkeit u⋆", "Bodentemperatur",
             "relative Feuchte", "Güte CO₂"]
    raw.columns = names
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column="Zeitstempel",
         columns=dict(zip(MAP, names[1:], strict=True)))


@layout
def latin1_names_and_units_declared(folder):
    raw, _ = table()
    names = ["horodatage", "échange_co2", "rayonnement", "température_air", "déficit",
             "vitesse_friction", "température_sol", "humidité", "qualité"]
    raw.columns = names
    text = lines(raw, sep=";")
    text.insert(1, ";µmol m-2 s-1;W m-2;°C;kPa;m s-1;°C;%;-")
    write(folder / "t.csv", text, encoding="latin-1")
    toml(folder, "t.csv", time_column="horodatage", delimiter=";", encoding="latin-1",
         rows_after_header=1, columns=dict(zip(MAP, names[1:], strict=True)))


@layout
def cp1252_units_in_parentheses_second_line(folder):
    raw, _ = table()
    text = lines(raw, sep="\t")
    text.insert(1, "\t(µmol m-2 s-1)\t(W m-2)\t(°C)\t(kPa)\t(m s-1)\t(°C)\t(%)\t(-)")
    write(folder / "t.txt", text, ending="\r\n", encoding="cp1252")
    toml(folder, "t.txt", delimiter="\t", encoding="cp1252", rows_after_header=1)


@layout
def pipe_delimited(folder):
    raw, _ = table()
    write(folder / "t.txt", lines(raw, sep="|"))
    toml(folder, "t.txt", delimiter="|")


@layout
def padded_fields_in_comma_file(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.rjust(12))
    raw.columns = [n.rjust(12) for n in raw.columns]
    write(folder / "t.csv", lines(raw, sep=","))
    toml(folder, "t.csv")


@layout
def plus_signs_and_exponents(folder):
    raw, _ = table()
    for column in raw.columns[1:8]:
        values = pd.to_numeric(raw[column])
        raw[column] = [f"{v:+.6E}" for v in values]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@layout
def blank_lines_after_header_and_at_end(folder):
    def edit(text, raw):
        text[1:1] = [""]
        text += ["", "", ""]
        return text

    edited(folder, edit)


@layout
def stamp_column_in_the_middle_and_quoted_notes(folder):
    raw, _ = table()
    raw = raw[["co2_net", "sun_in", "air_c", "stamp", "dryness", "fric_vel", "soil_c",
               "humid", "co2_grade"]].copy()
    notes = np.where(np.arange(len(raw)) % 97 == 0, '"fan check, filter ok"', "")
    raw.insert(4, "remark", notes)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@layout
def month_name_dates(folder):
    split_stamps(folder, {"date": "%d-%b-%Y", "hm": "%H:%M"}, "%d-%b-%Y %H:%M")


@layout
def quoted_header_plain_records_crlf(folder):
    def edit(text, raw):
        text[0] = ",".join(f'"{n}"' for n in raw.columns)
        return text

    edited(folder, edit, ending="\r\n")


@layout
def whitespace_file_with_quoted_stamps(folder):
    raw, ends = table()
    raw["stamp"] = ['"' + s + '"' for s in stamps(ends, "%Y-%m-%d %H:%M")]
    write(folder / "t.dat", lines(raw, sep=" "))
    toml(folder, "t.dat", delimiter="whitespace", time_format="%Y-%m-%d %H:%M")


@layout
def whitespace_date_and_time_columns(folder):
    split_stamps(folder, {"date": "%Y/%m/%d", "hm": "%H:%M"}, "%Y/%m/%d %H:%M", sep="   ",
                 name="t.dat", delimiter="whitespace")


@layout
def dos_end_of_file_mark(folder):
    raw, _ = table()
    data = ("\r\n".join(lines(raw)) + "\r\n").encode() + b"\x1a"
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")


@layout
def duplicate_column_names(folder):
    raw, _ = table()
    raw.insert(3, "spare", "0")
    raw.insert(5, "spare", "1", allow_duplicates=True)
    raw.insert(6, "air_c", raw["air_c"].str.replace(r"^(-?)", r"\g<1>1", regex=True),
               allow_duplicates=True)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@layout
def header_names_padded_with_spaces(folder):
    def edit(text, raw):
        text[0] = ", ".join(f" {n} " for n in raw.columns)
        return text

    edited(folder, edit)


@layout
def row_number_column_without_name(folder):
    raw, _ = table()
    raw.insert(0, "", [str(i + 1) for i in range(len(raw))])
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@layout
def missing_written_with_decimal_comma(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    raw = raw.replace("-9999", "-9999,000")
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",")


@layout
def last_line_without_line_end(folder):
    raw, _ = table()
    (folder / "t.csv").write_bytes("\r\n".join(lines(raw)).encode())
    toml(folder, "t.csv")


@layout
def start_stamps_month_files_with_unit_rows(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta("30min"), "%Y-%m-%d %H:%M")
    for month, part in months(raw, ends):
        text = lines(part, sep="\t")
        text.insert(1, "\t".join(UNITS))
        write(folder / f"s{month:02d}.tsv", text)
    toml(folder, "s*.tsv", delimiter="\t", time_format="%Y-%m-%d %H:%M", time_marks="start",
         rows_after_header=1)


@layout
def units_line_in_brackets_second_line(folder):
    def edit(text, raw):
        text.insert(1, ",".join(f"[{u}]" for u in UNITS))
        return text

    edited(folder, edit, rows_after_header=1)


@layout
def semicolon_quoted_decimal_comma_with_units(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: '"' + c.str.replace(".", ",", regex=False) + '"')
    text = lines(raw, sep=";")
    text.insert(1, ";".join(f'"{u}"' for u in UNITS))
    write(folder / "t.csv", text, encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";", decimal=",", rows_after_header=1)


@layout
def newest_record_first(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw.iloc[::-1]))
    toml(folder, "t.csv")


@layout
def mixed_line_ends_of_joined_parts(folder):
    raw, _ = table()
    text = lines(raw)
    data = "\r\n".join(text[:8000]) + "\r\n" + "\n".join(text[8000:]) + "\n"
    (folder / "t.csv").write_bytes(data.encode())
    toml(folder, "t.csv")


@layout
def gzip_of_appended_daily_members(folder):
    raw, ends = table()
    day = ((ends - pd.Timedelta("30min")).dt.day_of_year).to_numpy()
    members = [gzip.compress(("\n".join(lines(raw[day == d], header=d == 1)) + "\n").encode(),
                             mtime=0) for d in range(1, 366)]
    (folder / "t.csv.gz").write_bytes(b"".join(members))
    toml(folder, "t.csv.gz")


@layout
def bzip2_of_two_streams(folder):
    raw, _ = table()
    text = lines(raw)
    (folder / "t.csv.bz2").write_bytes(bz2.compress(("\n".join(text[:9000]) + "\n").encode())
                                       + bz2.compress(("\n".join(text[9000:]) + "\n").encode()))
    toml(folder, "t.csv.bz2")


@layout
def whitespace_file_quoted_names_with_blanks(folder):
    raw, _ = table()
    names = ["time stamp", "co2 net", "sun in", "air c", "dryness", "fric vel", "soil c",
             "humid", "co2 grade"]
    text = [" ".join(f'"{n}"' for n in names)] + lines(raw, sep="  ", header=False)
    write(folder / "t.dat", text)
    toml(folder, "t.dat", delimiter="whitespace", time_column="time stamp",
         columns=dict(zip(MAP, names[1:], strict=True)))


@layout
def year_doy_hhmm_written_as_floats(folder):
    split_stamps(folder, {"yr": "%Y", "doy": "%j", "hhmm": "%H%M"}, "%Y %j %H%M", cell=lambda s: f"{int(s)}.0")


@layout
def missing_as_a_lone_point_declared(folder):
    raw, _ = table()
    raw = raw.replace("-9999", ".")
    write(folder / "t.dat", lines(raw, sep=" "))
    toml(folder, "t.dat", delimiter="whitespace", missing=["."])


@layout
def numbers_with_bare_points(folder):
    raw, _ = table()
    for column in raw.columns[1:8]:
        raw[column] = raw[column].str.replace(r"^(-?)0\.", r"\1.", regex=True)
        raw[column] = raw[column].str.replace(r"^(-?\d+)\.0+$", r"\1.", regex=True)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@layout
def month_files_order_changes_with_units_line(folder):
    raw, ends = table()
    unit_of = dict(zip(raw.columns, UNITS, strict=True))
    rng = np.random.default_rng(8)
    for month, part in months(raw, ends):
        order = ["stamp"] + list(rng.permutation(part.columns[1:]))
        text = lines(part[order])
        text.insert(1, ",".join(unit_of[c] for c in order))
        write(folder / f"u{month:02d}.csv", text)
    toml(folder, "u*.csv", rows_after_header=1)


@layout
def civil_time_twelve_hour_clock(folder):
    restamped(folder, lambda ends: list(ends.dt.tz_localize("Etc/GMT-1")
                                        .dt.tz_convert("Europe/Berlin")
                                        .dt.strftime("%m/%d/%Y %I:%M %p")),
              "%m/%d/%Y %I:%M %p", time_zone="Europe/Berlin")


@layout
def utc_column_named_so_with_zone_set(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta("1h"), "%Y-%m-%d %H:%M")
    raw = raw.rename(columns={"stamp": "time_utc"})
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column="time_utc", time_format="%Y-%m-%d %H:%M",
         time_zone="UTC")


@layout
def trailing_delimiters_header_units_and_records_differ(folder):
    def edit(text, raw):
        text.insert(1, ",".join(UNITS))
        text = [text[0] + ",", text[1]] + [line + ",," for line in text[2:]]
        return text

    edited(folder, edit, rows_after_header=1)


@layout
def last_record_written_twice(folder):
    def edit(text, raw):
        return text + [text[-1]]

    edited(folder, edit)


@layout
def utf8_bom_on_every_month_file_and_cat_joined(folder):
    raw, ends = table()
    data = b"".join(("\ufeff" + "\n".join(lines(part)) + "\n").encode()
                    for _, part in months(raw, ends))
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")


@layout
def apostrophe_text_marks(folder):
    restamped(folder, lambda ends: ["'" + s for s in stamps(ends, "%Y-%m-%d %H:%M")],
              "%Y-%m-%d %H:%M")


@layout
def weekday_in_stamps(folder):
    restamped(folder, "%a %d %b %Y %H:%M")


@layout
def excel_serial_days_declared(folder):
    restamped(folder, serial_days, "days since 1899-12-30")


@layout
def unix_seconds_declared_utc(folder):
    restamped(folder, unix_seconds, "seconds since 1970-01-01 00:00:00 UTC", shift="1h")


@layout
def excel_1904_days_five_decimals(folder):
    raw, ends = table()
    raw["stamp"] = [f"{v:.5f}" for v in (ends - pd.Timestamp("1904-01-01")) / pd.Timedelta("1D")]
    write(folder / "t.txt", lines(raw, sep="\t"), ending="\r\n")
    toml(folder, "t.txt", delimiter="\t", time_format="days since 1904-01-01")


@layout
def newest_first_in_civil_time(folder):
    raw, ends = table()
    local = (ends.dt.tz_localize("Etc/GMT-1").dt.tz_convert("Europe/Berlin"))
    raw["stamp"] = list(local.dt.strftime("%Y-%m-%d %H:%M"))
    write(folder / "t.csv", lines(raw.iloc[::-1]))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_zone="Europe/Berlin")


@layout
def newest_first_month_files(folder):
    raw, ends = table()
    for month, part in months(raw, ends):
        write(folder / f"n{month:02d}.csv", lines(part.iloc[::-1]))
    toml(folder, "n*.csv")


@layout
def decomposed_umlauts_in_header(folder):
    """A header written on a system that stores names decomposed (NFD: a + U+0308)
    while the site TOML is typed composed (NFC)."""
    import unicodedata
    raw, _ = table()
    names = ["Zeit", "CO2-Austausch", "Strahlung", "Lufttemperatur", "Sättigungsdefizit",
             "Schubspannung", "Bodentemperatur", "Feuchte", "Güteklasse"]
    raw.columns = [unicodedata.normalize("NFD", n) for n in names]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column="Zeit", columns=dict(zip(MAP, names[1:], strict=True)))


@layout
def no_break_space_in_header_names(folder):
    raw, _ = table()
    names = ["time stamp", "co2 net", "sun in", "air c", "dryness", "fric vel", "soil c",
             "humid", "co2 grade"]
    raw.columns = [n.replace(" ", "\u00a0") for n in names]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column="time stamp",
         columns=dict(zip(MAP, names[1:], strict=True)))


@layout
def undeclared_minus_6999_codes(folder):
    raw, _ = table()
    raw = raw.replace("-9999", "-6999")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", missing=[])


@layout
def excel_serial_days_decimal_comma(folder):
    raw, ends = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    serial = (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")
    raw["stamp"] = [f"{v:.6f}".replace(".", ",") for v in serial]
    write(folder / "t.csv", lines(raw, sep=";"), encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";", decimal=",", time_format="days since 1899-12-30")


@layout
def iso_utc_z_with_milliseconds(folder):
    restamped(folder, "%Y-%m-%dT%H:%M:%S.000Z", "ISO8601", shift="1h")


@layout
def year_doy_and_clock_columns(folder):
    split_stamps(folder, {"year": "%Y", "doy": "%j", "clock": "%H:%M"}, "%Y %j %H:%M")


@layout
def units_line_states_kpa_settings_silent(folder):
    def edit(text, raw):
        text.insert(1, ",".join(UNITS))
        return text

    edited(folder, edit, rows_after_header=1, units={})


@layout
def bracket_unit_kpa_settings_silent(folder):
    named_with_units(folder, "{} [{}]", units={})


@layout
def excel_serial_days_of_civil_time(folder):
    restamped(folder, lambda ends: serial_days(ends.dt.tz_localize("Etc/GMT-1")
                                               .dt.tz_convert("Europe/Berlin")
                                               .dt.tz_localize(None)),
              "days since 1899-12-30", time_zone="Europe/Berlin")


# --------------------------------------------------------------------------- judging
def truth(missing):
    """The example's own frame, with the records a layout leaves out missing."""
    frame, _ = read_site_config(TREE / "examples" / "quillmoor_grassland.toml").read()
    if missing is not None:
        frame = frame.copy()
        frame.loc[missing] = np.nan
    return frame


def compare(read, expected):
    """'' where every stamp and value is the expected one; else what differs."""
    if not read.index.equals(expected.index):
        return (f"stamps: {len(read)} records from {read.index[0]} to {read.index[-1]}, "
                f"expected {len(expected)} from {expected.index[0]}")
    columns = [c for c in expected.columns if c != "nee_flag" or c in read.columns]
    if set(read.columns) - set(expected.columns) or set(columns) != set(expected.columns):
        return f"columns {list(read.columns)}"
    for column in columns:
        a, b = read[column].to_numpy(float), expected[column].to_numpy(float)
        same = (a == b) | (np.isnan(a) & np.isnan(b))
        if not same.all():
            at = np.flatnonzero(~same)[0]
            return (f"{column}: {int((~same).sum())} cell(s) differ, first at "
                    f"{read.index[at]}: {a[at]} for {b[at]}")
    return ""


def command(*args, cwd):
    done = subprocess.run([PY, "-m", "fluxpart", *args], cwd=cwd, env=ENV,
                          capture_output=True, text=True)
    return done.returncode, done.stdout, done.stderr


def judge(name, folder, base_tables, cli=True):
    try:
        missing = LAYOUTS[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    state = reading_state(folder, lambda: truth(missing),
                          lambda report: f"{len(report.warnings)} warning(s)")
    if not cli or state[0] == "CRASH":
        return state
    return commands_agree(state, folder, base_tables if missing is None else {})


def reading_state(folder, want, said, refusal_due=False):
    """``(state, detail)`` of reading folder/site.toml in process against the frame
    `want()`: right (`said(report)` the detail), WRONG, refused or CRASH; a reading where
    `refusal_due` is WRONG."""
    try:
        read, report = read_site_config(folder / "site.toml").read()
        difference = compare(read, want())
        if difference or refusal_due:
            return "WRONG", difference or "read, where a refusal was due: " + said(report)
        return "right", said(report)
    except FluxpartError as error:
        return "refused", str(error).splitlines()[0]
    except Exception:        # noqa: BLE001 - a crash is what the probe looks for
        return "CRASH", traceback.format_exc().strip().splitlines()[-1]


def commands_agree(state, folder, base_tables):
    """`state` where ``fluxpart check`` and ``run`` in `folder` agree with the reading
    (a refusal as one ``error:`` line, a run of a read layout exit 0 with the tables of
    `base_tables`); else the CRASH or WRONG they show."""
    for verb, args in (("check", ("check", "site.toml")),
                       ("run", ("run", "site.toml", "--out", "out", "--quiet"))):
        code, out, err = command(*args, cwd=folder)
        if "Traceback" in err or code not in (0, 1, 2):
            return "CRASH", f"{verb} exit {code}: {err.strip().splitlines()[-1]}"
        errors = [line for line in err.splitlines() if line.startswith("error:")]
        # check lists a unit or range refusal among its problems (exit 1, "run stops")
        listed = verb == "check" and code == 1 and "(run stops)" in out
        if state[0] == "refused" and not listed and (code != 2 or len(errors) != 1):
            return "CRASH", f"{verb} exit {code} with {len(errors)} error line(s)"
        if state[0] == "right" and verb == "run":
            if code != 0:
                return "WRONG", f"read right but run exit {code}: {err.strip()[-200:]}"
            for name, table_ in base_tables.items():
                if not pd.read_parquet(folder / "out" / name).equals(table_):
                    return "WRONG", f"{name} differs from the example's run"
    return state


def example_run_tables():
    """The example's own run's ``timeseries`` and ``annual`` tables (run in W/_example)."""
    base = W / "_example"
    base.mkdir(parents=True, exist_ok=True)
    shutil.copy(EXAMPLE, base)
    shutil.copy(TREE / "examples" / "quillmoor_grassland.toml", base / "site.toml")
    command("run", "site.toml", "--out", "out", "--quiet", cwd=base)
    return {name: pd.read_parquet(base / "out" / name)
            for name in ("timeseries.parquet", "annual.parquet")}


def probe(cases, judge_one, what="layouts", width=55):
    """Judge the `cases` named on the command line (all where none is), each in a fresh
    folder of W with ``judge_one(name, folder, base_tables, cli)``; print one line each
    and the counts."""
    names = [a for a in sys.argv[1:] if a in cases] or list(cases)
    cli = "--no-cli" not in sys.argv
    base_tables = example_run_tables() if cli else {}
    counts = {}
    for name in names:
        folder = W / name
        shutil.rmtree(folder, ignore_errors=True)
        folder.mkdir(parents=True)
        state, detail = judge_one(name, folder, base_tables, cli)
        counts[state] = counts.get(state, 0) + 1
        print(f"{state:8} {name:{width}} {detail[:230]}", flush=True)
    print(f"{len(names)} {what}: " + ", ".join(f"{v} {k}" for k, v in sorted(counts.items()))
          + f" (scratch: {W})")


def main():
    probe(LAYOUTS, judge)


if __name__ == "__main__":
    main()
