"""Probe: more logger layouts a tower or a data portal hands over (round layouts42).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts42.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts41.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might: stamps with a UTC offset that changes in summer,
Unix milliseconds (also in scientific notation), day numbers to three decimals, two-digit years, month names, ordinal dates, periods ("14:00-14:30"),
midnight as 24:00 in one column; no-value codes of several kinds in one file; a last value
cut mid-number, zero bytes in a gzip, a record cut by a restart; blank lines between
records; header blocks of three lines and units lines the config contradicts; two heights
of air temperature; daily files in a year/month/day folder tree and a file a variable;
workbooks and Arrow files. Its truth is the example's frame (cells a case leaves out
missing), or ``"refused"`` where no reading is right without the user's word (one
``error:`` line is due). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``;
the last line counts each class.
"""
import gzip
import os
import sys
from datetime import timezone
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts42-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts39 as p39  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts41 as p41  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, write  # noqa: E402

from fluxpart.io import read_site_config  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def civil(ends):
    """The example's end stamps (local standard time, UTC+1) on a civil clock of
    Central Europe, as aware timestamps (summer time from 28 March to 31 October 2021)."""
    utc = (ends - pd.Timedelta("1h")).dt.tz_localize(timezone.utc)
    return utc.dt.tz_convert(ZoneInfo("Europe/Berlin"))


def epoch(ends, unit):
    """The example's end stamps as a count of `unit` since 1970-01-01 00:00 UTC."""
    return [str(v) for v in (ends - pd.Timedelta("1h") - pd.Timestamp("1970-01-01"))
            // pd.Timedelta(unit)]


def with_header_lines(folder, extra, **inputs):
    """The example with the lines `extra` (lists of cells) under its header."""
    def edit(text, raw):
        text[1:1] = [inputs.get("sep", ",").join(cells) for cells in extra]
        return text

    p40.edited(folder, edit, rows_after_header=len(extra), **inputs)


def last_line_cut(folder, order, keep):
    """The example with its columns in `order`, the last line cut to its first `keep`
    characters from the end (no line end after it: the logger lost power mid-write)."""
    raw, _ = table()
    text = lines(raw[order])
    text[-1] = text[-1][:keep]
    (folder / "t.csv").write_bytes(("\n".join(text)).encode())
    toml(folder, "t.csv")
    return p41.LAST_DROPPED


def converted(cells, form):
    """`cells` (text) with each number v written `form(v)`, -9999 kept."""
    return [c if c == "-9999" else form(float(c)) for c in cells]


def in_other_unit(folder, column, form, unit, declared=None):
    """The example with `column` written `form(value)` and `unit` on a units line; with
    `declared` (variable -> unit), the truth: a folder beside `folder` holding the same
    file read with that unit declared (round unitsrow: a units line's unit is read where
    the config names none)."""
    def edit(text, raw):
        raw[column] = converted(raw[column], form)
        out = lines(raw)
        at = list(raw.columns).index(column)
        out[1:1] = [",".join(UNITS[:at] + [unit] + UNITS[at + 1:])]
        return out

    p40.edited(folder, edit, rows_after_header=1)
    if declared is None:
        return None
    clean = folder.parent / (folder.name + "_truth")
    clean.mkdir(exist_ok=True)
    p40.edited(clean, edit, rows_after_header=1, units={"vpd": "kPa"} | declared)
    return clean


def split_by_variable(folder, groups, pattern="{}.csv"):
    """One file a group of columns (name -> columns), each with the stamp."""
    raw, _ = table()
    names = []
    for name, columns in groups.items():
        names.append(pattern.format(name))
        (folder / names[-1]).parent.mkdir(parents=True, exist_ok=True)
        write(folder / names[-1], lines(raw[["stamp", *columns]]))
    return names


# --------------------------------------------------------------------------- stamps
@case
def iso_offset_changing_in_summer(folder):
    p38.restamped(folder, lambda ends: [s.isoformat() for s in civil(ends)], "ISO8601")


@case
def iso_offset_changing_in_summer_without_colon_in_own_column(folder):
    p41.stamp_split(folder, lambda ends: {"local": list(civil(ends).dt.strftime("%Y-%m-%d %H:%M")),
                                          "offset": list(civil(ends).dt.strftime("%z"))},
                    "%Y-%m-%d %H:%M %z")


@case
def unix_milliseconds(folder):
    p38.restamped(folder, lambda ends: epoch(ends, "1ms"),
                  "milliseconds since 1970-01-01 00:00:00 UTC")


@case
def unix_seconds_written_as_floats(folder):
    p38.restamped(folder, lambda ends: [f"{v}.0" for v in epoch(ends, "1s")],
                  "seconds since 1970-01-01 UTC")


@case
def unix_seconds_under_percent_s(folder):
    p38.restamped(folder, lambda ends: epoch(ends, "1s"), "%s")
    return "refused"      # not a strptime field: the count's own form names the fix


@case
def two_digit_years_day_first(folder):
    p38.restamped(folder, "%d/%m/%y %H:%M")


@case
def two_digit_years_month_first_twelve_hour_unpadded(folder):
    p38.restamped(folder, lambda ends: [f"{s.month}/{s.day}/{s:%y} {int(s.strftime('%I'))}:"
                                        f"{s:%M %p}" for s in ends], "%m/%d/%y %I:%M %p")


@case
def month_names_upper_case_one_column(folder):
    p38.restamped(folder, lambda ends: [s.upper() for s in stamps(ends, "%d-%b-%Y %H:%M")],
                  "%d-%b-%Y %H:%M")


@case
def month_names_in_full_unpadded_day(folder):
    p38.restamped(folder, lambda ends: [f"{s.day} {s:%B %Y %H:%M}" for s in ends],
                  "%d %B %Y %H:%M")


@case
def ordinal_dates_with_t(folder):
    p38.restamped(folder, "%Y-%jT%H:%M", "%Y-%jT%H:%M")


@case
def iso_t_and_z_without_seconds(folder):
    p38.restamped(folder, "%Y-%m-%dT%H:%MZ", "ISO8601", shift="1h")


def closing_at_2400(form, closing):
    """The end stamps written by `form`, midnight as the day before's `closing` form."""
    def written(ends):
        start = ends - pd.Timedelta("30min")
        midnight = (ends.dt.hour == 0) & (ends.dt.minute == 0)
        return list(np.where(midnight, start.dt.strftime(closing), ends.dt.strftime(form)))

    return written


@case
def midnight_as_2400_in_one_column(folder):
    p38.restamped(folder, closing_at_2400("%Y-%m-%d %H:%M", "%Y-%m-%d 24:00"),
                  "%Y-%m-%d %H:%M")


def period(ends):
    start = ends - pd.Timedelta("30min")
    return [f"{a:%H:%M}-{b:%H:%M}" for a, b in zip(start, ends, strict=True)]


@case
def period_column_beside_the_date(folder):
    p41.stamp_split(folder, lambda ends: {
        "date": stamps(ends - pd.Timedelta("30min"), "%Y-%m-%d"), "period": period(ends)},
        "%Y-%m-%d %H:%M")
    return "refused"      # which end is the stamp? the user's word (time_marks) is due


@case
def period_in_the_stamp_read_as_its_start(folder):
    p38.restamped(folder, lambda ends: [f"{a:%Y-%m-%d} {p}" for a, p in
                                        zip(ends - pd.Timedelta("30min"), period(ends),
                                            strict=True)],
                  "%Y-%m-%d %H:%M", time_marks="start")
    return "refused"      # a format reading one time of two: which is meant?


# --------------------------------------------------------------------------- no value
@case
def seven_no_value_spellings_declared(folder):
    p40.missing_words(folder, ["-9999.0", "-999", "NaN", "NA", "#N/A", "null", '""'],
                      missing=[-9999, -999, "NA", "#N/A", "null"])


@case
def seven_no_value_spellings_minus_999_undeclared(folder):
    p40.missing_words(folder, ["-9999.0", "-999", "NaN", "NA", "#N/A", "null", '""'],
                      missing=[-9999, "NA", "#N/A", "null"])
    return "refused"


@case
def no_value_words_in_a_semicolon_decimal_comma_file(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    words = ["#N/A", '""', "NULL", "NaN"]
    for j, column in enumerate(raw.columns[1:8]):
        at = raw[column] == "-9999"
        raw.loc[at, column] = [words[(i + j) % len(words)] for i in range(int(at.sum()))]
    p41.saved(folder, raw, sep=";", decimal=",", missing=[-9999, "#N/A", "NULL"])


# --------------------------------------------------------------------------- ends of files
@case
def last_value_cut_mid_number_in_the_last_field(folder):
    order = ["stamp", "co2_net", "sun_in", "air_c", "dryness", "fric_vel", "soil_c",
             "co2_grade", "humid"]
    return last_line_cut(folder, order, -3)       # "...,0,94.3" cut to "...,0,9"


@case
def last_value_cut_to_its_minus_sign(folder):
    order = ["stamp", "co2_net", "sun_in", "fric_vel", "soil_c", "humid", "co2_grade",
             "dryness", "air_c"]
    return last_line_cut(folder, order, -4)       # "...,-2.05" cut to "...,-"


@case
def zero_bytes_ending_a_gzip_member(folder):
    data = p40.plain_bytes() + b"\x00" * 4096
    (folder / "t.csv.gz").write_bytes(gzip.compress(data, mtime=0))
    toml(folder, "t.csv.gz")


@case
def record_cut_by_a_restart_header_after_it(folder):
    def edit(text, raw):
        at = 4000
        text[at] = text[at][:20]
        text[at + 1:at + 1] = [text[0]]
        return text

    p40.edited(folder, edit)
    cut = np.zeros(len(table()[0]), dtype=bool)
    cut[3999] = True      # dropped, as a file's last line cut short is (layouts42)
    return cut


# --------------------------------------------------------------------------- blank lines
@case
def blank_line_between_every_record(folder):
    p40.edited(folder, lambda text, raw: [x for line in text for x in (line, "")])


@case
def blank_line_between_every_record_crlf(folder):
    p40.edited(folder, lambda text, raw: [x for line in text for x in (line, "")],
               ending="\r\n")


@case
def blank_lines_of_spaces_between_records(folder):
    p40.edited(folder, lambda text, raw: [x for line in text for x in (line, "   ")])


# --------------------------------------------------------------------------- header blocks
@case
def three_line_header_units_in_brackets_then_aggregation(folder):
    with_header_lines(folder, [[f"[{u}]" for u in UNITS],
                               ["", "Avg", "Avg", "Avg", "Avg", "Avg", "Avg", "Avg", "Smp"]])


@case
def units_line_says_hpa_config_kpa_values_kpa(folder):
    with_header_lines(folder, [[u.replace("kPa", "hPa") for u in UNITS]])


@case
def units_line_says_hpa_config_kpa_values_hpa(folder):
    in_other_unit(folder, "dryness", lambda v: f"{v * 10:.3f}", "hPa")
    return "refused"      # the config's kPa against a file of hPa: ten times too dry


@case
def units_line_says_kelvin_config_silent_values_kelvin(folder):
    # refused before round unitsrow; now read in the unit the units line writes
    return in_other_unit(folder, "air_c", lambda v: f"{v + 273.15:.2f}", "K", {"tair": "K"})


def two_heights(folder, **inputs):
    """The example's air temperature as "air_c_2m" beside an "air_c_12m" 0.4 K cooler."""
    raw, _ = table()
    raw = raw.rename(columns={"air_c": "air_c_2m"})
    raw.insert(4, "air_c_12m", converted(raw["air_c_2m"], lambda v: f"{v - 0.4:.2f}"))
    p41.saved(folder, raw, **inputs)


@case
def two_heights_of_air_temperature_one_mapped(folder):
    two_heights(folder, columns=MAP | {"tair": "air_c_2m"})


@case
def two_heights_of_air_temperature_base_name_mapped(folder):
    two_heights(folder)
    return "refused"      # "air_c" is no column; which height? the user's word


# --------------------------------------------------------------------------- files
@case
def daily_files_in_a_year_month_day_tree_same_name(folder):
    raw, ends = table()
    day = p39.day_of(ends)
    for key in pd.unique(day):
        place = folder / key[:4] / key[4:6] / key[6:]
        place.mkdir(parents=True, exist_ok=True)
        write(place / "tower.csv", lines(raw[day == key]))
    toml(folder, "**/tower.csv")


@case
def a_file_a_variable_group(folder):
    toml(folder, split_by_variable(folder, {
        "co2": ["co2_net", "co2_grade"], "turbulence": ["fric_vel"],
        "weather": ["sun_in", "air_c", "dryness", "humid"], "soil": ["soil_c"]}))


@case
def a_file_a_variable(folder):
    toml(folder, "vars/*.csv")
    split_by_variable(folder, {c: [c] for c in table()[0].columns[1:]}, "vars/{}.csv")


@case
def flux_and_weather_month_files_in_two_folders(folder):
    raw, ends = table()
    month = p39.month_of(ends)
    for kind, columns in (("flux", ["co2_net", "fric_vel", "co2_grade"]),
                          ("weather", ["sun_in", "air_c", "dryness", "soil_c", "humid"])):
        (folder / kind).mkdir(exist_ok=True)
        p39.parts(folder / kind, raw[["stamp", *columns]], month, kind + "_{:02d}.csv")
    toml(folder, "*/*.csv")


# --------------------------------------------------------------------------- other formats
def workbook_bytes():
    """A minimal Office Open XML workbook (ECMA-376 parts) holding two cells."""
    parts = [
        ("[Content_Types].xml", '<?xml version="1.0"?><Types xmlns="http://schemas.'
         'openxmlformats.org/package/2006/content-types"/>'),
        ("xl/workbook.xml", "<workbook/>"),
        ("xl/worksheets/sheet1.xml", "<worksheet><sheetData><row><c t=\"inlineStr\"><is>"
         "<t>stamp</t></is></c></row></sheetData></worksheet>")]
    return p40.zipped([(name, text.encode()) for name, text in parts])


@case
def spreadsheet_workbook_xlsx(folder):
    (folder / "quillmoor.xlsx").write_bytes(workbook_bytes())
    toml(folder, "quillmoor.xlsx")
    return "refused"      # openpyxl is no dependency: "save the sheet as CSV"


@case
def arrow_feather_file(folder):
    import pyarrow as pa
    import pyarrow.feather as feather

    feather.write_feather(pa.Table.from_pandas(table()[0]), folder / "t.feather")
    toml(folder, "t.feather")
    # read since the typed tables of a later round (fluxpart.table_formats): the truth
    # is the example's frame, no longer "refused"


@case
def parquet_with_typed_columns(folder):
    raw, ends = table()
    frame = raw.drop(columns="stamp").apply(pd.to_numeric)
    frame.insert(0, "stamp", ends)
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    # read since the typed tables of a later round (fluxpart.table_formats)


@case
def latin1_degree_in_a_tab_file_units_line_undeclared(folder):
    with_header_lines(folder, [[u.replace("degC", "°C") for u in UNITS]],
                      sep="\t", delimiter="\t", encoding="latin-1", name="t.txt")
    return "refused"      # the encoding is the user's word (set [input] encoding)


@case
def stamp_cell_missing_on_one_record(folder):
    def edit(text, raw):
        text[5001] = "," + text[5001].split(",", 1)[1]
        return text

    p40.edited(folder, edit)
    return "refused"


# --------------------------------------------------------------------------- more of the kinds
@case
def unix_milliseconds_in_scientific_notation(folder):
    p38.restamped(folder, lambda ends: [f"{int(v):.6E}" for v in epoch(ends, "1ms")],
                  "milliseconds since 1970-01-01 00:00:00 UTC")
    return "refused"      # seven digits: stamps rounded to 1000 s, no record's own


@case
def iso_2400_closing_each_day(folder):
    p38.restamped(folder, closing_at_2400("%Y-%m-%dT%H:%M:%S", "%Y-%m-%dT24:00:00"),
                  "ISO8601")


@case
def year_first_slashes_unpadded(folder):
    p38.restamped(folder, lambda ends: [f"{s.year}/{s.month}/{s.day} {s.hour}:{s:%M}"
                                        for s in ends], "%Y/%m/%d %H:%M")


@case
def two_digit_years_with_dots_and_seconds(folder):
    p38.restamped(folder, "%d.%m.%y %H:%M:%S", "%d.%m.%y %H:%M:%S")


@case
def a_file_a_variable_weather_in_another_stamp_form(folder):
    raw, ends = table()
    write(folder / "co2.csv", lines(raw[["stamp", "co2_net", "fric_vel", "co2_grade"]]))
    weather = raw[["stamp", "sun_in", "air_c", "dryness", "soil_c", "humid"]].copy()
    weather["stamp"] = stamps(ends, "%Y-%m-%d %H:%M")
    write(folder / "weather.csv", lines(weather))
    toml(folder, ["co2.csv", "weather.csv"])
    # read since a later round read a later file's stamps in the one other layout that
    # reads every one of them (named in a note): the truth is the example's frame


@case
def gzip_flux_file_beside_plain_weather_file(folder):
    raw, _ = table()
    data = "\n".join(lines(raw[["stamp", "co2_net", "fric_vel", "co2_grade"]])) + "\n"
    (folder / "co2.csv.gz").write_bytes(gzip.compress(data.encode(), mtime=0))
    write(folder / "weather.csv", lines(raw[["stamp", "sun_in", "air_c", "dryness", "soil_c",
                                              "humid"]]))
    toml(folder, ["co2.csv.gz", "weather.csv"])


@case
def blank_line_after_every_line_with_units_line(folder):
    def edit(text, raw):
        text[1:1] = [",".join(UNITS)]
        return [x for line in text for x in (line, "")]

    p40.edited(folder, edit, rows_after_header=1)
    return "refused"      # a blank line under the header: counted or not? (the fix named)


@case
def cp1252_superscripts_in_units_line_declared(folder):
    raw, _ = table()
    text = lines(raw)
    text[1:1] = [",".join(["", "µmol/m²/s", "W/m²", "°C", "kPa", "m/s", "°C", "%", ""])]
    write(folder / "t.csv", text, encoding="cp1252")
    toml(folder, "t.csv", encoding="cp1252", rows_after_header=1)


@case
def units_line_says_kpa_config_hpa_values_kpa(folder):
    with_header_lines(folder, [UNITS], units={"vpd": "hPa"})
    return "refused"      # the config's hPa against a file that writes kPa and holds it


@case
def daily_tree_with_resource_fork_files(folder):
    """A tree copied from a Mac to an exFAT drive: "._tower.csv" beside each file
    (AppleDouble, magic 00 05 16 07 (m)) matches the glob."""
    daily_files_in_a_year_month_day_tree_same_name(folder)
    for path in list(folder.glob("**/tower.csv")):
        (path.parent / "._tower.csv").write_bytes(b"\x00\x05\x16\x07\x00\x02\x00\x00"
                                                  + b"Mac OS X        " + b"\x00" * 60)


@case
def every_line_quoted_whole(folder):
    p40.edited(folder, lambda text, raw: [f'"{line}"' for line in text])
    return "refused"      # one field a line: a record's fields are no CSV fields


def german_sheet(folder, **inputs):
    """A German spreadsheet's CSV: semicolons, decimal commas, "#NV" for no value."""
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False)).replace("-9999", "#NV")
    p41.saved(folder, raw, sep=";", decimal=",", **inputs)


@case
def german_sheet_no_value_error_declared(folder):
    german_sheet(folder, missing=["#NV"])


@case
def german_sheet_no_value_error_undeclared(folder):
    german_sheet(folder)
    return "refused"


@case
def tab_file_decimal_comma_undeclared(folder):
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    p41.saved(folder, raw, sep="\t", name="t.txt")
    return "refused"      # "0,329" in a tab file: the decimal mark is the user's word


@case
def every_line_indented_by_two_blanks(folder):
    p40.edited(folder, lambda text, raw: ["  " + line for line in text])


@case
def units_line_with_carets_and_slashes(folder):
    with_header_lines(folder, [["", "umol m^-2 s^-1", "W/m^2", "deg C", "kPa", "m s^-1",
                                "deg C", "%", ""]])


@case
def units_line_says_fahrenheit_config_silent_values_fahrenheit(folder):
    # refused before round unitsrow; now read in the unit the units line writes
    return in_other_unit(folder, "air_c", lambda v: f"{v * 1.8 + 32:.2f}", "degF",
                         {"tair": "degF"})


@case
def spreadsheet_rows_of_delimiters_only_at_the_end(folder):
    """A sheet's formatted but empty rows, saved as lines of commas alone."""
    p40.edited(folder, lambda text, raw: text + [","  * 8] * 25, ending="\r\n")


@case
def rows_of_delimiters_only_among_the_records(folder):
    def edit(text, raw):
        for at in (9000, 4000, 200):
            text[at:at] = ["," * 8]
        return text

    p40.edited(folder, edit)


@case
def placeholder_record_with_an_empty_quoted_stamp_at_the_end(folder):
    p40.edited(folder, lambda text, raw: text + ['"",' + ",".join(['""'] * 8)])


@case
def spreadsheet_day_numbers_with_three_decimals(folder):
    """Day numbers shown with three decimals (86.4 s) and saved so."""
    p38.restamped(folder, lambda ends: [f"{v:.3f}" for v in (ends - pd.Timestamp("1899-12-30"))
                                        / pd.Timedelta("1D")], "days since 1899-12-30")
    return "refused"      # up to 43 s off: no stamp of the record's own


def judge(name, folder, base_tables, cli):
    """The case's state as ``probe_layouts41.judge`` finds it (``probe_layouts40``'s
    where the case returns the records it leaves out)."""
    expected = CASES[name](folder)
    if isinstance(expected, Path):        # the same file read with its unit declared
        state = p38.reading_state(
            folder, lambda: read_site_config(expected / "site.toml").read()[0],
            lambda report: f"{len(report.notes)} note(s): "
            + "; ".join(n[-90:] for n in report.notes))
        return state if not cli or state[0] == "CRASH" else p38.commands_agree(state, folder,
                                                                               {})
    if isinstance(expected, np.ndarray):
        p40.CASES[name] = CASES[name]
        return p40.judge(name, folder, base_tables, cli)
    p41.CASES[name] = CASES[name]
    return p41.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
