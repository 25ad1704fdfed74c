"""Probe: one logger file's layout as stations and data portals write it (round layouts40).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts40.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py``; none of its or
``probe_layouts39.py``'s cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might: header blocks of several lines in other orders, units
in the name line, quoted names and fields with commas, byte-order marks, trailing
delimiters, words for no value, stamps with offsets, seconds, 24:00, drift, stamps over
several columns, archives, other encodings, a second header block written at a firmware
update. Its truth is the example's frame (records or cells a case leaves out missing), or
``"refused"`` where no reading is right without the user's word (one ``error:`` line is
due). One line a case: ``right``, ``refused``, ``WRONG`` (read, but a stamp or value
differs, or read where a refusal was due, or the run's tables differ) or ``CRASH``; the
last line counts each class.
"""
import gzip
import io
import os
import sys
import traceback
import zipfile
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts40-")))]
import probe_layouts38 as p38  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, truth, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def edited(folder, edit=lambda text, raw: text, ending="\n", encoding="utf-8", name="t.csv",
           sep=",", **inputs):
    """The example's lines (fields split by `sep`) as `edit(text, raw)` changes them, read
    with `inputs`."""
    raw, _ = table()
    write(folder / name, edit(lines(raw, sep=sep), raw), ending=ending, encoding=encoding)
    toml(folder, name, **inputs)


def every_field_quoted(folder, no_value, name, **inputs):
    """The example with every field quoted, its -9999 cells written `no_value`, CRLF."""
    raw, _ = table()
    raw = raw.replace("-9999", no_value)
    text = ['"' + '","'.join(row) + '"' for row in [list(raw.columns)] + raw.values.tolist()]
    write(folder / name, text, ending="\r\n")
    toml(folder, name, **inputs)


def remarked(folder, note, every, at):
    """The example with a remark column holding `note` on every `every`-th record."""
    raw, _ = table()
    raw.insert(8, "remark", np.where(np.arange(len(raw)) % every == at, note, ""))
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


def renamed_columns(folder, names, sep=",", written="utf-8", extra_lines=(), **inputs):
    """The example under the header `names` (time column first), mapped by those names,
    the file in the encoding `written`."""
    raw, _ = table()
    raw.columns = names
    text = lines(raw, sep=sep)
    text[1:1] = list(extra_lines)
    write(folder / "t.csv", text, encoding=written)
    toml(folder, "t.csv", time_column=names[0], columns=dict(zip(MAP, names[1:], strict=True)),
         **inputs)


def restamped(folder, written, read, **inputs):
    raw, ends = table()
    raw["stamp"] = written(ends) if callable(written) else stamps(ends, written)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format=read, **inputs)


def stamp_columns(folder, cells, time_format, **inputs):
    """The example with its stamp written as the columns `cells(ends)` returns (a dict)."""
    raw, ends = table()
    for name, values in reversed(list(cells(ends).items())):
        raw.insert(0, name, values)
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=list(cells(ends)), time_format=time_format, **inputs)


def missing_words(folder, words, **inputs):
    """The example's -9999 cells written in turn as `words`."""
    raw, _ = table()
    for j, column in enumerate(raw.columns[1:8]):
        at = raw[column] == "-9999"
        raw.loc[at, column] = [words[(i + j) % len(words)] for i in range(int(at.sum()))]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


def zipped(members):
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in members:
            info = zipfile.ZipInfo(name, date_time=(2021, 12, 31, 0, 0, 0))
            archive.writestr(info, data)
    return buffer.getvalue()


def plain_bytes(raw=None, ending="\n"):
    raw = table()[0] if raw is None else raw
    return (ending.join(lines(raw)) + ending).encode()


UNITS_LINE = ",".join(UNITS)
PROCESS_LINE = ",".join(["TS", "Avg", "Avg", "Avg", "Avg", "Avg", "Smp", "Avg", "Smp"])


# --------------------------------------------------------------------------- header blocks
@case
def header_program_serial_site_then_names_units_processing(folder):
    def edit(text, raw):
        return (["Logger program: qm_flux_v7,compiled 2020-11-02", "Serial number: 58213",
                 "Site: Quillmoor tower 2 (fictional)", text[0], UNITS_LINE, PROCESS_LINE]
                + text[1:])

    edited(folder, edit, rows_before_header=3, rows_after_header=2)


@case
def header_names_processing_then_units(folder):
    def edit(text, raw):
        return [text[0], PROCESS_LINE, UNITS_LINE] + text[1:]

    edited(folder, edit, rows_after_header=2)


@case
def header_units_line_above_names(folder):
    def edit(text, raw):
        return [UNITS_LINE] + text

    edited(folder, edit, rows_before_header=1)


@case
def header_title_lines_with_a_blank_line_counted(folder):
    def edit(text, raw):
        return ["Quillmoor tower 2 (fictional)", "", "exported 2022-01-04"] + text

    edited(folder, edit, rows_before_header=3)


@case
def header_title_lines_undeclared(folder):
    def edit(text, raw):
        return ["Quillmoor tower 2 (fictional)", "Serial number: 58213"] + text

    edited(folder, edit)
    return "refused"


@case
def header_units_and_processing_lines_undeclared(folder):
    def edit(text, raw):
        return [text[0], UNITS_LINE, PROCESS_LINE] + text[1:]

    edited(folder, edit)
    return "refused"


# --------------------------------------------------------------------------- names
NAMES_WITH_SPACES = ["time stamp", "co2 net", "sun in", "air c", "dryness", "fric vel",
                     "soil c", "humid", "co2 grade"]


@case
def units_in_brackets_names_with_spaces(folder):
    renamed_columns(folder, [n if u == "-" else f"{n} [{u}]"
                             for n, u in zip(NAMES_WITH_SPACES, UNITS, strict=True)])


@case
def names_with_spaces_and_unit_suffix(folder):
    suffix = ["", "umol/m2/s", "W/m2", "degC", "kPa", "m/s", "degC", "%", ""]
    renamed_columns(folder, [f"{n} {s}".strip() for n, s in
                             zip(NAMES_WITH_SPACES, suffix, strict=True)])


@case
def quoted_names_with_embedded_commas(folder):
    names = ["time stamp"] + [f"{n}, {u}" for n, u in zip(NAMES_WITH_SPACES[1:8], UNITS[1:8],
                                                           strict=True)] + ["co2 grade"]
    raw, _ = table()
    text = [",".join(f'"{n}"' for n in names)] + lines(raw, header=False)
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_column="time stamp", columns=dict(zip(MAP, names[1:],
                                                                     strict=True)))


@case
def names_with_units_mapped_without_them(folder):
    raw, _ = table()
    raw.columns = [n if u == "-" else f"{n} [{u}]" for n, u in zip(raw.columns, UNITS,
                                                                   strict=True)]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def cp1252_degree_in_names_undeclared(folder):
    renamed_columns(folder, ["time", "co2 flux", "global rad", "air T °C", "vpd", "u star",
                             "soil T °C", "rh", "co2 qc"], written="cp1252")


@case
def cp1252_degree_in_names_declared(folder):
    renamed_columns(folder, ["time", "co2 flux", "global rad", "air T °C", "vpd", "u star",
                             "soil T °C", "rh", "co2 qc"], written="cp1252",
                    encoding="cp1252")


@case
def latin1_micro_in_units_line_undeclared(folder):
    def edit(text, raw):
        return [text[0], ",µmol m-2 s-1,W m-2,°C,kPa,m s-1,°C,%,-"] + text[1:]

    edited(folder, edit, encoding="latin-1", rows_after_header=1)


@case
def utf8_names_read_as_latin1(folder):
    renamed_columns(folder, ["time", "co2 flux", "global rad", "air T °C", "vpd", "u star",
                             "soil T °C", "rh", "co2 qc"], encoding="latin-1")
    return "refused"


# --------------------------------------------------------------------------- fields, quotes, ends
@case
def quoted_remarks_with_commas_and_doubled_quotes(folder):
    remarked(folder, '"filter changed, ""zero"" check; ok"', 211, 5)


@case
def bom_crlf_trailing_comma_every_line_with_units(folder):
    def edit(text, raw):
        return [line + "," for line in [text[0], UNITS_LINE] + text[1:]]

    edited(folder, edit, ending="\r\n", encoding="utf-8-sig", rows_after_header=1)


@case
def trailing_tab_every_line(folder):
    edited(folder, lambda text, raw: [line + "\t" for line in text], name="t.txt", sep="\t",
           delimiter="\t")


@case
def every_field_quoted_with_quoted_nan(folder):
    every_field_quoted(folder, "NAN", "t.dat", missing=["NAN"])


@case
def old_mac_cr_line_ends(folder):
    edited(folder, ending="\r")


@case
def trailing_spaces_after_records(folder):
    def edit(text, raw):
        return [text[0]] + [line + "   " for line in text[1:]]

    edited(folder, edit)


# --------------------------------------------------------------------------- words for no value
@case
def no_value_words_common(folder):
    missing_words(folder, ["nan", "-INF", "NaN", "", "+INF", "-nan"])


@case
def no_value_words_declared(folder):
    missing_words(folder, ["#N/A", "---", "NULL", "N/A", "nan", ""],
                  missing=[-9999, "#N/A", "---", "NULL", "N/A"])


@case
def no_value_words_undeclared(folder):
    missing_words(folder, ["#N/A", "---", "NULL", "N/A", "nan", ""])
    return "refused"


@case
def missing_code_written_with_decimals(folder):
    missing_words(folder, ["-9999.0000", "-9999.00", "-9999"])


# --------------------------------------------------------------------------- stamps
def civil_offsets(ends):
    local = ends.dt.tz_localize("Etc/GMT-1").dt.tz_convert("Europe/Berlin")
    text = local.dt.strftime("%Y-%m-%dT%H:%M:%S%z")
    return [s[:-2] + ":" + s[-2:] for s in text]


def unpadded(form):
    """Stamps with every field but the minutes unpadded, as `form` orders them."""
    return lambda ends: [form.format(t=t) for t in ends]


#: stamps written one way (a strftime format or a function of the end stamps) and read
#: under a format: name -> (written, time_format)
RESTAMPED = {
    "iso_stamps_with_summer_offsets": (civil_offsets, "ISO8601"),
    "offsets_without_colon_percent_z": ("%Y-%m-%dT%H:%M:%S+0100", "%Y-%m-%dT%H:%M:%S%z"),
    "milliseconds_under_a_seconds_format": ("%Y-%m-%d %H:%M:%S.000", "%Y-%m-%d %H:%M:%S"),
    "seconds_and_milliseconds_under_a_minute_format": ("%Y-%m-%d %H:%M:%S.000",
                                                       "%Y-%m-%d %H:%M"),
    "unpadded_month_day_hour": (unpadded("{t.year}-{t.month}-{t.day} {t.hour}:{t.minute:02d}"),
                                "%Y-%m-%d %H:%M"),
    "day_first_dots_unpadded": (unpadded("{t.day}.{t.month}.{t.year} {t.hour}:{t.minute:02d}"),
                                "%d.%m.%Y %H:%M"),
    "compact_stamps_with_seconds": ("%Y%m%d%H%M%S", "%Y%m%d%H%M%S"),
    "two_digit_year_day_first": ("%d.%m.%y %H:%M", "%d.%m.%y %H:%M"),
}
for _name, (_written, _read) in RESTAMPED.items():
    CASES[_name] = (lambda written, read: lambda folder: restamped(folder, written, read))(
        _written, _read)


@case
def date_and_decimal_hour(folder):
    stamp_columns(folder, lambda ends: {
        "date": stamps(ends, "%Y-%m-%d"),
        "hour": [f"{h:.1f}" for h in ends.dt.hour + ends.dt.minute / 60]}, "%Y-%m-%d %H")


def closing_days(folder, dates, clock, closing, time_format):
    """Stamps as the date columns `dates` (name -> strftime format) of each interval's
    start and a time column "clock" written by `clock(ends)`, `closing` at midnight."""
    def cells(ends):
        start = ends - pd.Timedelta("30min")
        midnight = ((ends.dt.hour == 0) & (ends.dt.minute == 0)).to_numpy()
        return {**{name: list(start.dt.strftime(form)) for name, form in dates.items()},
                "clock": list(np.where(midnight, closing, clock(ends)))}

    stamp_columns(folder, cells, time_format)


@case
def date_day_first_and_decimal_hour_24_closing(folder):
    closing_days(folder, {"Datum": "%d.%m.%Y"},
                 lambda ends: [f"{h:.2f}" for h in ends.dt.hour + ends.dt.minute / 60],
                 "24.00", "%d.%m.%Y %H")


@case
def year_doy_hhmm_2400_closing_each_day(folder):
    closing_days(folder, {"yr": "%Y", "doy": "%j"}, lambda ends: ends.dt.strftime("%H%M"),
                 "2400", "%Y %j %H%M")


@case
def date_and_clock_2400_closing_each_day(folder):
    closing_days(folder, {"date": "%d.%m.%Y"}, lambda ends: ends.dt.strftime("%H:%M"),
                 "24:00", "%d.%m.%Y %H:%M")


@case
def year_and_fractional_day_of_year(folder):
    stamp_columns(folder, lambda ends: {
        "yr": list(ends.dt.strftime("%Y")),
        "doy": [f"{v:.5f}" for v in ends.dt.day_of_year + (ends.dt.hour * 60 + ends.dt.minute)
                / 1440]}, "%Y %j")


@case
def year_and_fractional_day_counted_from_zero(folder):
    stamp_columns(folder, lambda ends: {
        "yr": list(ends.dt.strftime("%Y")),
        "doy": [f"{v:.5f}" for v in ends.dt.day_of_year - 1 + (ends.dt.hour * 60
                                                               + ends.dt.minute) / 1440]},
        "%Y %j")
    return "refused"


@case
def five_columns_year_to_minute(folder):
    stamp_columns(folder, lambda ends: {k: list(ends.dt.strftime(f)) for k, f in
                                        (("y", "%Y"), ("mo", "%m"), ("d", "%d"), ("h", "%H"),
                                         ("mi", "%M"))}, "%Y %m %d %H %M")


@case
def date_and_clock_with_seconds_day_first(folder):
    stamp_columns(folder, lambda ends: {"Datum": stamps(ends, "%d.%m.%Y"),
                                        "Uhrzeit": stamps(ends, "%H:%M:%S")},
                  "%d.%m.%Y %H:%M:%S")


@case
def logger_drift_a_few_odd_seconds(folder):
    raw, ends = table()
    rng = np.random.default_rng(40)
    seconds = np.zeros(len(raw), dtype=int)
    odd = rng.choice(len(raw), 60, replace=False)
    seconds[odd] = rng.choice([-7, -3, 2, 4, 6, 9], 60)
    raw["stamp"] = stamps(ends + pd.to_timedelta(seconds, unit="s"), "%Y-%m-%d %H:%M:%S")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")


@case
def logger_drift_growing_then_reset(folder):
    """A clock running 2 s a day fast, set right on the first of every month."""
    raw, ends = table()
    days = (ends - ends.dt.to_period("M").dt.start_time) / pd.Timedelta("1D")
    drift = pd.to_timedelta(np.round(days * 2).astype(int), unit="s")
    raw["stamp"] = stamps(ends + drift, "%Y-%m-%d %H:%M:%S")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")
    return "refused"


@case
def spreadsheet_day_fraction_time_column(folder):
    stamp_columns(folder, lambda ends: {
        "date": stamps(ends, "%Y-%m-%d"),
        "time": [f"{v:.6f}" for v in (ends.dt.hour * 60 + ends.dt.minute) / 1440]},
        "%Y-%m-%d %H:%M")
    return "refused"


# --------------------------------------------------------------------------- archives, formats
@case
def zip_of_one_file(folder):
    (folder / "t.zip").write_bytes(zipped([("quillmoor_2021.csv", plain_bytes())]))
    toml(folder, "t.zip")


@case
def zip_made_on_a_mac(folder):
    (folder / "t.zip").write_bytes(zipped([("quillmoor_2021.csv", plain_bytes()),
                                           ("__MACOSX/._quillmoor_2021.csv", b"\0\5\26\7" * 20)]))
    toml(folder, "t.zip")


@case
def zip_of_a_folder_holding_one_file(folder):
    (folder / "t.zip").write_bytes(zipped([("export/", b""),
                                           ("export/quillmoor_2021.dat", plain_bytes())]))
    toml(folder, "t.zip")


@case
def gzip_upper_case_name(folder):
    (folder / "T.CSV.GZ").write_bytes(gzip.compress(plain_bytes(ending="\r\n"), mtime=0))
    toml(folder, "T.CSV.GZ")


@case
def gzip_name_on_a_plain_file(folder):
    (folder / "t.csv.gz").write_bytes(plain_bytes())
    toml(folder, "t.csv.gz")


@case
def parquet_input(folder):
    table()[0].to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    return "refused"


@case
def netcdf_input(folder):
    raw, ends = table()
    frame = raw.drop(columns="stamp").apply(pd.to_numeric)
    frame.index = pd.Index(ends, name="time")
    frame.to_xarray().to_netcdf(folder / "t.nc", engine="h5netcdf")
    toml(folder, "t.nc")
    return "refused"


# --------------------------------------------------------------------------- firmware updates
def second_block(folder, later_units, later_edit=lambda part: part, title=True):
    """The example with a second header block (title, names, units) written at 1 July."""
    raw, ends = table()
    cut = (ends > "2021-07-01").to_numpy()
    later = later_edit(raw[cut].copy())
    head = ["Quillmoor tower 2 (fictional) program qm_flux_v7"] if title else []
    text = head + [",".join(raw.columns), UNITS_LINE] + lines(raw[~cut], header=False)
    text += head + [",".join(later.columns), ",".join(later_units)] + lines(later, header=False)
    write(folder / "t.csv", text)
    toml(folder, "t.csv", rows_before_header=len(head), rows_after_header=1)


@case
def firmware_update_same_block_again(folder):
    second_block(folder, UNITS)


@case
def firmware_update_rg_unit_changes(folder):
    def kilowatts(part):
        values = pd.to_numeric(part["sun_in"])
        part["sun_in"] = np.where(values == -9999, "-9999",
                                  [f"{v / 1000:.5f}" for v in values])
        return part

    second_block(folder, [("kW m-2" if u == "W m-2" else u) for u in UNITS], kilowatts)
    return "refused"


@case
def firmware_update_air_temperature_in_kelvin(folder):
    def kelvin(part):
        values = pd.to_numeric(part["air_c"])
        part["air_c"] = np.where(values == -9999, "-9999", [f"{v + 273.15:.2f}" for v in values])
        return part

    units = list(UNITS)
    units[3] = "K"
    second_block(folder, units, kelvin)
    return "refused"


@case
def firmware_update_adds_a_column(folder):
    def battery(part):
        part.insert(len(part.columns), "batt_v", "12.6")
        return part

    second_block(folder, UNITS + ["V"], battery)


# --------------------------------------------------------------------------- more of the same kinds
@case
def quoted_remark_holding_a_line_break(folder):
    remarked(folder, '"visit: analyser cleaned,\nzero checked"', 499, 7)


@case
def semicolon_decimal_comma_words_trailing_bom_crlf(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    for j, column in enumerate(raw.columns[1:8]):
        at = raw[column] == "-9999"
        raw.loc[at, column] = [["NaN", "-INF", ""][(i + j) % 3] for i in range(int(at.sum()))]
    write(folder / "t.csv", [line + ";" for line in lines(raw, sep=";")], ending="\r\n",
          encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def portal_comment_lines_above_header_declared(folder):
    def edit(text, raw):
        return ["# Quillmoor tower 2 (fictional)", "# exported 2022-01-04 by the data portal",
                "# missing values: -9999"] + text

    edited(folder, edit, rows_before_header=3)


@case
def portal_comment_lines_above_header_undeclared(folder):
    def edit(text, raw):
        return ["# Quillmoor tower 2 (fictional)", "# exported 2022-01-04 by the data portal",
                "# missing values: -9999"] + text

    edited(folder, edit)
    return "refused"


@case
def stamp_as_last_column(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw[list(raw.columns[1:]) + ["stamp"]]))
    toml(folder, "t.csv")


@case
def record_written_twice_seconds_apart(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d %H:%M:%S")
    text = lines(raw)
    cells = text[5001].split(",")
    cells[0] = cells[0][:-2] + "04"
    cells[3] = f"{float(cells[3]) + 0.4:.2f}"
    write(folder / "t.csv", text[:5002] + [",".join(cells)] + text[5002:])
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")
    return "refused"


@case
def clock_set_back_a_few_records_half_a_minute_off(folder):
    raw, ends = table()
    off = np.zeros(len(raw), dtype=int)
    off[7000:7004] = 35
    raw["stamp"] = stamps(ends + pd.to_timedelta(off, unit="s"), "%Y-%m-%d %H:%M:%S")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M:%S")
    return "refused"


@case
def zip_of_data_and_readme(folder):
    (folder / "t.zip").write_bytes(zipped([
        ("quillmoor_2021.csv", plain_bytes()),
        ("README.txt", b"Quillmoor tower 2 (fictional): half-hourly records, -9999 missing\n")]))
    toml(folder, "t.zip")


@case
def zip_of_two_tables_and_readme(folder):
    raw, ends = table()
    cut = (ends > "2021-07-01").to_numpy()
    (folder / "t.zip").write_bytes(zipped([
        ("quillmoor_2021a.csv", plain_bytes(raw[~cut])),
        ("quillmoor_2021b.csv", plain_bytes(raw[cut])), ("README.md", b"# Quillmoor\n")]))
    toml(folder, "t.zip")
    return "refused"


@case
def firmware_update_title_line_changes_only(folder):
    raw, ends = table()
    cut = (ends > "2021-07-01").to_numpy()
    text = (["Quillmoor tower 2 (fictional) program qm_flux_v7", ",".join(raw.columns),
             UNITS_LINE] + lines(raw[~cut], header=False)
            + ["Quillmoor tower 2 (fictional) program qm_flux_v8", ",".join(raw.columns),
               UNITS_LINE] + lines(raw[cut], header=False))
    write(folder / "t.csv", text)
    toml(folder, "t.csv", rows_before_header=1, rows_after_header=1)


@case
def firmware_update_units_respelled(folder):
    second_block(folder, ["-", "umol/m2/s", "W/m2", "degC", "kPa", "m/s", "degC", "%", "-"])


@case
def flag_column_of_words(folder):
    raw, _ = table()
    raw["co2_grade"] = raw["co2_grade"].map({"0": "ok", "1": "check", "2": "bad"})
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", flag_accept=["ok"])


def whitespace_bracket_names(folder, form):
    """A whitespace-delimited file whose names carry their units as `form` writes them."""
    raw, _ = table()
    names = [n if u == "-" else form(n, u) for n, u in zip(raw.columns, UNITS, strict=True)]
    raw.columns = names
    write(folder / "t.dat", lines(raw, sep="  "))
    toml(folder, "t.dat", delimiter="whitespace", columns=dict(zip(MAP, names[1:],
                                                                   strict=True)))


@case
def whitespace_names_with_bracket_units(folder):
    whitespace_bracket_names(folder, lambda n, u: f"{n}[{u.replace(' ', '')}]")


@case
def whitespace_names_with_bracket_units_holding_blanks(folder):
    whitespace_bracket_names(folder, lambda n, u: f"{n} [{u}]")


@case
def start_and_end_stamp_columns(folder):
    raw, ends = table()
    raw.insert(1, "period_start", stamps(ends - pd.Timedelta("30min"), "%Y-%m-%d %H:%M"))
    raw.insert(2, "period_end", stamps(ends, "%Y-%m-%d %H:%M"))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column="period_end", time_format="%Y-%m-%d %H:%M")


@case
def middle_stamps_declared(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends - pd.Timedelta("15min"), "%Y-%m-%d %H:%M")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_marks="middle")


@case
def quoted_empty_cells_for_no_value(folder):
    every_field_quoted(folder, "", "t.csv")


@case
def date_and_integer_hhmm_columns(folder):
    stamp_columns(folder, lambda ends: {
        "date": list((ends - pd.Timedelta("30min")).dt.strftime("%Y-%m-%d")),
        "hhmm": [str(int(v)) if v else "2400" for v in
                 (ends.dt.hour * 100 + ends.dt.minute)]}, "%Y-%m-%d %H%M")


# --------------------------------------------------------------------------- judging
def judge(name, folder, base_tables, cli):
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    refusal_due = isinstance(expected, str)

    def said(report):
        warned = "; ".join(w.splitlines()[0][:70] for w in report.warnings)[:160]
        return f"{len(report.warnings)} w: {warned}"

    state = p38.reading_state(folder, lambda: truth(None if refusal_due else expected), said,
                              refusal_due)
    if not cli or state[0] == "CRASH":
        return state
    return p38.commands_agree(state, folder, base_tables if expected is None else {})


def main():
    p38.probe(CASES, judge, "cases", 56)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
