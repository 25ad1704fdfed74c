"""Probe: more logger layouts a tower, a spreadsheet or a database hands over (round layouts45).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts45.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts44.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station, a spreadsheet or a database export might: JSON lines (one
object a record), a Parquet file with the stamps as its index, a spreadsheet's CSV with
exponents and unpadded hours, day counts since an epoch in a netCDF-like dump, a date and
minutes since midnight, a constant "+01:00" on every stamp, records sorted by their quality
flag, eight spellings of no value in one file ("1.#QNAN" and "\\N" among them), a group line
above the names, a units row in brackets, a daily summary row after every day (and day or
month files closed by a line of the date alone or the month), an unnamed
index column beside a named stamp, month files overlapping by a whole month, Latin-1 names,
a database's row-count footer, "NULL" for no value. Its truth is the example's frame, or
``"refused"`` where no reading is right without the user's word (one ``error:`` line is
due). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts
each class.
"""
import gzip
import json
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts45-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts41 as p41  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, write  # noqa: E402

CASES = {}
VALUE_COLUMNS = p41.VALUE_COLUMNS


def case(function):
    CASES[function.__name__] = function
    return function


def numbers(raw):
    """The example's value columns as floats (-9999 kept as written)."""
    return raw[VALUE_COLUMNS + ["co2_grade"]].apply(pd.to_numeric)


# --------------------------------------------------------------------------- other formats
def json_records(raw, ends, missing_as_null=True):
    values = numbers(raw)
    out = []
    for stamp, row in zip(stamps(ends, "%Y-%m-%d %H:%M"), values.itertuples(index=False),
                          strict=True):
        record = {"stamp": stamp}
        for name, v in zip(values.columns, row, strict=True):
            record[name] = None if (missing_as_null and v == -9999) else v
        out.append(json.dumps(record))
    return out


@case
def json_lines_one_object_a_record(folder):
    """A database's export: '{"stamp": "2021-01-01 00:30", "co2_net": 0.329, ...}' a line."""
    raw, ends = table()
    write(folder / "t.jsonl", json_records(raw, ends))
    toml(folder, "t.jsonl", time_format="%Y-%m-%d %H:%M")
    # read since layouts46 (fluxpart.table_formats); refused before


@case
def json_lines_gzipped(folder):
    raw, ends = table()
    write(folder / "t.jsonl.gz", json_records(raw, ends),
          opener=lambda d: gzip.compress(d, mtime=0))
    toml(folder, "t.jsonl.gz", time_format="%Y-%m-%d %H:%M")
    # read since layouts46 (fluxpart.table_formats); refused before


@case
def json_array_of_records(folder):
    """One JSON array of objects (as a web service returns them)."""
    raw, ends = table()
    write(folder / "t.json", ["[" + ",\n".join(json_records(raw, ends)) + "]"])
    toml(folder, "t.json", time_format="%Y-%m-%d %H:%M")
    # read since layouts46 (fluxpart.table_formats); refused before


@case
def parquet_with_the_stamps_as_its_index(folder):
    """pandas' ``to_parquet`` of a frame indexed by its stamps (no stamp column)."""
    raw, ends = table()
    frame = numbers(raw)
    frame.index = pd.DatetimeIndex(ends, name="stamp")
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    # read since layouts46 (fluxpart.table_formats); refused before


@case
def parquet_with_an_unnamed_stamp_index(folder):
    raw, ends = table()
    frame = numbers(raw)
    frame.index = pd.DatetimeIndex(ends)
    frame.to_parquet(folder / "t.parquet")
    toml(folder, "t.parquet")
    # read since layouts46 (fluxpart.table_formats); refused before


@case
def csv_of_a_frame_written_with_its_stamp_index_and_a_row_number_column(folder):
    """A leading unnamed row number, then the named stamp: ",stamp,co2_net,..." (pandas'
    ``to_csv`` of a frame whose index is a row number)."""
    raw, _ = table()
    raw.insert(0, "", [str(i) for i in range(len(raw))])
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- spreadsheets
def sheet_number(cell):
    """A cell as a spreadsheet's "Scientific" number format writes it: "3.290000E-01"."""
    return "-9999" if cell == "-9999" else f"{float(cell):.6E}"


@case
def spreadsheet_exponents_and_day_first_unpadded_hour(folder):
    """ "05/03/2021 0:30" (day first, decided by days above 12) and "3.29E-01" values."""
    raw, ends = table()
    for column in VALUE_COLUMNS:
        raw[column] = [sheet_number(c) for c in raw[column]]
    raw["stamp"] = [f"{s:%d/%m/%Y} {s.hour}:{s:%M}" for s in ends]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%d/%m/%Y %H:%M")


@case
def spreadsheet_month_first_unpadded_both(folder):
    """ "3/5/2021 0:30" (month first, nothing padded) read with "%m/%d/%Y %H:%M"."""
    p38.restamped(folder, lambda ends: [f"{s.month}/{s.day}/{s.year} {s.hour}:{s:%M}"
                                        for s in ends], "%m/%d/%Y %H:%M")


@case
def spreadsheet_day_first_file_read_month_first(folder):
    """ "05/03/2021 0:30" day first, the config saying month first (days above 12 show it)."""
    p38.restamped(folder, lambda ends: [f"{s:%d/%m/%Y} {s.hour}:{s:%M}" for s in ends],
                  "%m/%d/%Y %H:%M")
    return "refused"


def counted(folder, unit, since, digits, time_format):
    """The example's stamps written as the count of `unit` since `since`, to `digits`
    decimals ("g": as short as exact), read as `time_format`."""
    def written(ends):
        return [format(v, f".{digits}f" if digits != "g" else "g")
                for v in (ends - pd.Timestamp(since)) / pd.Timedelta(unit)]

    p38.restamped(folder, written, time_format)


@case
def spreadsheet_serial_days_with_four_decimals(folder):
    """ "44197.0208" (the 1900 date system, four decimals: 8.6 s)."""
    counted(folder, "1D", "1899-12-30", 4, "days since 1899-12-30")


# --------------------------------------------------------------------------- counted time
@case
def days_since_2020_as_a_netcdf_dump_writes_them(folder):
    """A "time" column of float days since 2020-01-01, eleven decimals."""
    counted(folder, "1D", "2020-01-01", 11, "days since 2020-01-01 00:00:00")


@case
def days_since_2020_with_five_decimals(folder):
    """Days since 2020-01-01 rounded to five decimals (0.86 s)."""
    counted(folder, "1D", "2020-01-01", 5, "days since 2020-01-01")


@case
def hours_since_2021_start(folder):
    counted(folder, "1h", "2021-01-01", "g", "hours since 2021-01-01 00:00")


@case
def date_and_minutes_since_midnight(folder):
    """A "YYYY-MM-DD" column and one of minutes since midnight (0 to 1410, the start)."""
    raw, ends = table()
    starts = ends - pd.Timedelta("30min")
    raw.insert(0, "minute", [str(v) for v in starts.dt.hour * 60 + starts.dt.minute])
    raw.insert(0, "day", stamps(starts, "%Y-%m-%d"))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "minute"], time_format="%Y-%m-%d %H:%M",
         time_marks="start")
    # read since layouts47 (fluxpart.day_counts); refused before, naming the count


# --------------------------------------------------------------------------- offsets, order
@case
def constant_plus_one_hour_offset_on_every_stamp_with_a_space(folder):
    """ "2021-01-01 00:30:00 +01:00" (the site's standard time), read under %z."""
    p38.restamped(folder, lambda ends: [s + " +01:00" for s in
                                        stamps(ends, "%Y-%m-%d %H:%M:%S")],
                  "%Y-%m-%d %H:%M:%S %z")


@case
def constant_offset_on_every_stamp_not_in_the_format(folder):
    p38.restamped(folder, lambda ends: [s + "+01:00" for s in stamps(ends, "%Y-%m-%dT%H:%M:%S")],
                  "%Y-%m-%dT%H:%M:%S")
    return "refused"      # the offset is there: the user adds %z


@case
def records_sorted_by_quality_flag(folder):
    """A spreadsheet sorted by the flag column (stable: time order within a flag)."""
    raw, _ = table()
    raw = raw.sort_values("co2_grade", kind="stable")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def records_sorted_by_net_exchange(folder):
    raw, _ = table()
    raw = raw.iloc[np.argsort(pd.to_numeric(raw["co2_net"]).to_numpy(), kind="stable")]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def month_files_each_newest_first(folder):
    raw, ends = table()
    for month, part in p38.months(raw, ends):
        text = lines(part)
        write(folder / f"q_{month:02d}.csv", text[:1] + text[1:][::-1])
    toml(folder, "q_*.csv")


# --------------------------------------------------------------------------- no value
@case
def eight_no_value_spellings_with_qnan_and_backslash_n(folder):
    """ "-", "n/a", "#N/A", "NAN", "-9999.0", "1.#QNAN", "\\N" and "" in one file, the
    words the config does not name among them."""
    p40.missing_words(folder, ["-", "n/a", "#N/A", "NAN", "-9999.0", "1.#QNAN", "\\N", ""])
    return "refused"      # "-", "n/a", "\\N" are the user's word


@case
def eight_no_value_spellings_declared(folder):
    p40.missing_words(folder, ["-", "n/a", "#N/A", "NAN", "-9999.0", "1.#QNAN", "\\N", ""],
                      missing=[-9999, "-", "n/a", "#N/A", "\\N"])


@case
def qnan_and_ind_of_an_old_runtime(folder):
    """ "1.#QNAN", "-1.#IND", "1.#INF" as an old C runtime prints them."""
    p40.missing_words(folder, ["1.#QNAN", "-1.#IND", "-1.#QNAN"])


@case
def database_null_words(folder):
    """ "NULL" and "\\N" (a database's dump), declared."""
    p40.missing_words(folder, ["NULL", "\\N"], missing=[-9999, "NULL", "\\N"])


# --------------------------------------------------------------------------- header lines
def group_line(sep=","):
    return sep.join(["", "Fluxes", "", "Met", "", "", "Soil", "", ""])


@case
def group_line_above_the_names_declared(folder):
    p40.edited(folder, lambda text, raw: [group_line()] + text, rows_before_header=1)


@case
def group_line_above_the_names_undeclared(folder):
    """ "Fluxes,,,Met,,,Soil,," above the names, the config silent."""
    p40.edited(folder, lambda text, raw: [group_line()] + text)
    # read since layouts47 (header_cells.group_line_above); refused before


@case
def units_row_in_brackets_undeclared(folder):
    """ "[umol/m2/s]" cells under the names, the config silent."""
    units = ["[-]", "[umol/m2/s]", "[W/m2]", "[degC]", "[kPa]", "[m/s]", "[degC]", "[%]", "[-]"]
    p40.edited(folder, lambda text, raw: text[:1] + [",".join(units)] + text[1:])
    # read since layouts47 (header_cells.bracketed_units_row); refused before


@case
def group_line_names_and_bracket_units_declared(folder):
    units = ["[-]", "[umol/m2/s]", "[W/m2]", "[degC]", "[kPa]", "[m/s]", "[degC]", "[%]", "[-]"]
    p40.edited(folder, lambda text, raw: [group_line(), text[0], ",".join(units)] + text[1:],
               rows_before_header=1, rows_after_header=1)


# --------------------------------------------------------------------------- summary rows
def with_daily_lines(folder, label, stamp_format="%Y%m%d%H%M"):
    """The example, its stamps written as `stamp_format`, with a line after each day's 48
    records: ``label(day)`` in the stamp column, then the day's means."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, stamp_format)
    values = numbers(raw).replace(-9999, np.nan)
    day = (ends - pd.Timedelta("30min")).dt.date
    text = [",".join(raw.columns)]
    for d, rows in raw.groupby(day.to_numpy(), sort=True).groups.items():
        text += lines(raw.loc[rows], header=False)
        text.append(label(d) + "," + ",".join(f"{v:.3f}" for v in values.loc[rows].mean()))
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format=stamp_format)


@case
def daily_mean_row_after_every_day_stamped_with_the_date(folder):
    """After each day's 48 records a line "2021-01-01,<daily means>" (no clock)."""
    with_daily_lines(folder, lambda d: f"{d:%Y-%m-%d}")
    # read since layouts47 (fluxpart.day_summaries: the lines verified); refused before


@case
def daily_mean_row_stamped_with_the_date_in_an_iso_file(folder):
    """ "2021-01-01 00:30" records and a "2021-01-01" line of daily means after each day
    (a date alone also writes midnight in some exports)."""
    with_daily_lines(folder, lambda d: f"{d:%Y-%m-%d}", "%Y-%m-%d %H:%M")
    # read since layouts47 (fluxpart.day_summaries); refused before


@case
def daily_files_each_closed_by_a_mean_line_dated_with_the_date(folder):
    """Daily files of "2021-01-01 00:30" .. "2021-01-02 00:00" records, each closed by a
    line "2021-01-01,<daily means>" (the date alone is also a midnight)."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d %H:%M")
    values = numbers(raw).replace(-9999, np.nan)
    day = (ends - pd.Timedelta("30min")).dt.date
    for d, rows in raw.groupby(day.to_numpy(), sort=True).groups.items():
        text = lines(raw.loc[rows]) + [f"{d:%Y-%m-%d}," + ",".join(
            f"{v:.3f}" for v in values.loc[rows].mean())]
        write(folder / f"d_{d:%Y%m%d}.csv", text)
    toml(folder, "d_*.csv", time_format="%Y-%m-%d %H:%M")
    # read since layouts47 (fluxpart.day_summaries); refused before


def one_day_file_closed_by_its_date(folder, first, marks):
    """48 records from record `first`, stamped at their `marks` ("end" or "start") as
    "%Y-%m-%d %H:%M", then a line of their first stamp's date alone and their means."""
    raw, ends = table()
    placed = ends - pd.Timedelta("30min" if marks == "start" else "0min")
    raw["stamp"] = stamps(placed, "%Y-%m-%d %H:%M")
    values = numbers(raw).replace(-9999, np.nan)
    rows = raw.index[first:first + 48]
    text = lines(raw.loc[rows]) + [f"{ends[first] - pd.Timedelta('30min'):%Y-%m-%d}," + ",".join(
        f"{v:.3f}" for v in values.loc[rows].mean())]
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_marks=marks)
    # read since layouts47 (fluxpart.day_summaries): the example's 48 records
    return p38.truth(None).iloc[first:first + 48]


@case
def one_day_file_closed_by_a_mean_line_dated_with_the_date(folder):
    """A day's 48 records from 04:30, closed by "2021-01-05,<means>"."""
    return one_day_file_closed_by_its_date(folder, 200, "end")


@case
def one_day_file_of_start_stamps_closed_by_a_mean_line_dated_with_the_date(folder):
    """Start stamps "2021-01-05 00:00" .. "23:30", closed by "2021-01-05,<means>" (the
    first record's stamp again, as the date alone)."""
    return one_day_file_closed_by_its_date(folder, 192, "start")


@case
def month_files_each_closed_by_a_mean_line_dated_with_the_month(folder):
    """Month files closed by "2021-01,<monthly means>"."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d %H:%M")
    values = numbers(raw).replace(-9999, np.nan)
    month = (ends - pd.Timedelta("30min")).dt.month.to_numpy()
    for m in range(1, 13):
        part = raw[month == m]
        means = values[month == m].mean()
        write(folder / f"q_{m:02d}.csv", lines(part) + [f"2021-{m:02d}," + ",".join(
            f"{v:.3f}" for v in means)])
    toml(folder, "q_*.csv", time_format="%Y-%m-%d %H:%M")
    # read since layouts47 (fluxpart.day_summaries); refused before


@case
def daily_total_row_after_every_day_labelled(folder):
    """After each day's records a line "daily total,<values>"."""
    with_daily_lines(folder, lambda d: "daily total")
    # read since layouts47 (fluxpart.day_summaries); refused before


# --------------------------------------------------------------------------- files
@case
def month_files_overlapping_by_a_whole_month_equal_values(folder):
    """Two-month files (Jan-Feb, Feb-Mar, ...): every record but the ends written twice."""
    raw, ends = table()
    month = (ends - pd.Timedelta("30min")).dt.month.to_numpy()
    for m in range(1, 12):
        write(folder / f"q_{m:02d}_{m + 1:02d}.csv", lines(raw[(month == m) | (month == m + 1)]))
    toml(folder, "q_*.csv")


@case
def latin1_degree_and_micro_in_names_declared(folder):
    raw, _ = table()
    names = {"co2_net": "co2_net (µmol/m²/s)", "air_c": "air (°C)", "soil_c": "soil (°C)"}
    write(folder / "t.csv", lines(raw.rename(columns=names)), encoding="latin-1")
    toml(folder, "t.csv", encoding="latin-1",
         columns=MAP | {"nee": names["co2_net"], "tair": names["air_c"],
                        "tsoil": names["soil_c"]})


@case
def latin1_degree_and_micro_in_names_undeclared(folder):
    raw, _ = table()
    names = {"co2_net": "co2_net (µmol/m²/s)", "air_c": "air (°C)", "soil_c": "soil (°C)"}
    write(folder / "t.csv", lines(raw.rename(columns=names)), encoding="latin-1")
    toml(folder, "t.csv", columns=MAP | {"nee": names["co2_net"], "tair": names["air_c"],
                                          "tsoil": names["soil_c"]})
    return "refused"


@case
def database_row_count_footer(folder):
    """A query tool's CSV: the records, then "(17520 rows)"."""
    raw, _ = table()
    text = lines(raw) + [f"({len(raw)} rows)"]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def trailing_empty_column_semicolons_decimal_comma(folder):
    """A final ";" on every line of a decimal-comma file, the header too."""
    raw, _ = table()
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    write(folder / "t.csv", [t + ";" for t in lines(raw, sep=";")])
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def units_in_square_brackets_glued_to_names_with_a_group_line(folder):
    """ "Fluxes,,,..." above names like "co2_net[umol/m2/s]" mapped with their units."""
    raw, _ = table()
    glued = {n: (n if u == "-" else f"{n}[{u}]") for n, u in zip(raw.columns, UNITS,
                                                              strict=True)}
    raw = raw.rename(columns=glued)
    write(folder / "t.csv", [group_line()] + lines(raw))
    toml(folder, "t.csv", rows_before_header=1, columns={k: glued[v] for k, v in MAP.items()})


@case
def units_row_in_brackets_declared_tab_file(folder):
    units = ["[-]", "[umol/m2/s]", "[W/m2]", "[degC]", "[kPa]", "[m/s]", "[degC]", "[%]", "[-]"]
    raw, _ = table()
    text = lines(raw, sep="\t")
    write(folder / "t.txt", text[:1] + ["\t".join(units)] + text[1:])
    toml(folder, "t.txt", delimiter="\t", rows_after_header=1)


# --------------------------------------------------------------------------- spreadsheet losses
@case
def spreadsheet_scientific_format_on_every_number_missing_code_too(folder):
    """Every value "3.290000E-01", the missing code "-9.999000E+03"."""
    raw, _ = table()
    for column in VALUE_COLUMNS:
        raw[column] = [f"{float(c):.6E}" for c in raw[column]]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def spreadsheet_general_format_shortens_twelve_digit_stamps(folder):
    """A spreadsheet's "General" format shows 202101010030 as "2.02101E+11" and saves
    that: the stamps are lost."""
    raw, ends = table()
    raw["stamp"] = [f"{float(v):.5E}" for v in raw["stamp"]]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def flag_column_written_as_decimals(folder):
    """The quality flag "0.0", "1.0", "2.0" (a spreadsheet or a script's float column)."""
    raw, _ = table()
    raw["co2_grade"] = [f"{float(v):.1f}" for v in raw["co2_grade"]]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def month_files_overlapping_one_day_values_in_another_precision(folder):
    """Each month file repeats the next month's first day, its values with trailing
    zeros ("0.500" for "0.5"): equal values, other text."""
    raw, ends = table()
    month = (ends - pd.Timedelta("30min")).dt.month.to_numpy()
    for m in range(1, 13):
        part = raw[month == m]
        if m < 12:
            extra = raw[month == m + 1].iloc[:48].copy()
            for column in VALUE_COLUMNS:
                extra[column] = [c if c == "-9999" else f"{float(c):.4f}" for c in extra[column]]
            part = pd.concat([part, extra])
        write(folder / f"q_{m:02d}.csv", lines(part))
    toml(folder, "q_*.csv")


@case
def twelve_hour_clock_with_spanish_p_m(folder):
    """ "01/06/2021 12:30 p. m." as a Spanish-locale spreadsheet writes it."""
    def written(ends):
        return [s.replace("AM", "a. m.").replace("PM", "p. m.")
                for s in stamps(ends, "%d/%m/%Y %I:%M %p")]

    p38.restamped(folder, written, "%d/%m/%Y %I:%M %p")


@case
def cp1252_en_dash_for_no_value_declared(folder):
    """ "–" (an en dash, byte 0x96 in Windows-1252) for no value, encoding and code given."""
    raw, _ = table()
    raw = raw.replace("-9999", "\u2013")
    write(folder / "t.csv", lines(raw), encoding="cp1252")
    toml(folder, "t.csv", encoding="cp1252", missing=["\u2013"])


def main():
    # judged as probe_layouts43.py judges its cases (probe_layouts39.judge)
    p43.CASES.update(CASES)
    p38.probe(CASES, p43.judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
