"""Probe: logger files a tower really writes, not yet in probes 38-47 (round layouts48).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts48.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts47.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, a spreadsheet or a person might: compact ISO week dates, a
weekday name before the date, a comma before the fraction of a second under a ``,%f``
format, key=value metadata lines above the header, UTF-16 without a byte order mark, a slash
before the unit in the names, blank lines between days, the header written again above
every day, a zip of daily files, spreadsheet serial days in the 1904 system, a serial date
and a day fraction in two columns, the date and clock as the last two columns, minus signs
written as U+2212, decimal commas quoted in a comma file, values marked "*" as estimated, a
year's file closed by its totals or by its extremes, "-9999.0" in some columns and "NA" in
others. Its truth is the example's frame, or ``"refused"`` where the file cannot tell the
intent (one ``error:`` line naming the cause is due). One line a case: ``right``,
``refused``, ``WRONG`` or ``CRASH``; the last line counts each class.
"""
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts48-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
import probe_layouts45 as p45  # noqa: E402
from probe_layouts38 import UNITS, lines, stamps, table, toml, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def day_of(ends):
    """The day each record (stamped at its end) belongs to."""
    return (ends - pd.Timedelta("30min")).dt.date.to_numpy()


# --------------------------------------------------------------------------- stamps
@case
def iso_week_dates_compact_with_t(folder):
    """ISO 8601 basic week dates: "2021W225T0030" (year, week, weekday, clock)."""
    p38.restamped(folder, "%GW%V%uT%H%M")


@case
def weekday_name_before_the_date(folder):
    """ "Fri 2021-01-01 00:30", the format declaring the weekday."""
    p38.restamped(folder, "%a %Y-%m-%d %H:%M")


@case
def comma_before_the_fraction_under_a_comma_f_format_tab_file(folder):
    """ "2021-01-01 00:30:00,000" in a tab file, the format "%S,%f" as written."""
    raw, ends = table()
    raw["stamp"] = [s + ",000" for s in stamps(ends, "%Y-%m-%d %H:%M:%S")]
    write(folder / "t.txt", lines(raw, sep="\t"))
    toml(folder, "t.txt", delimiter="\t", time_format="%Y-%m-%d %H:%M:%S,%f")


@case
def spreadsheet_serial_days_of_the_1904_system(folder):
    """Serial days counted from 1904-01-01 (an old Mac spreadsheet) under a date format:
    read as the 1900 system they fall four years and a day early; nothing in the file
    tells the two apart."""
    p38.restamped(folder, lambda ends: [f"{v:.6f}" for v in
                                        (ends - pd.Timestamp("1904-01-01")) / pd.Timedelta("1D")],
                  "%Y-%m-%d %H:%M")
    return "refused"


def serial_date_and_day_fraction(folder, time_format):
    """A whole serial day (1900 system) and the time as a day fraction (six decimals),
    two columns, as a spreadsheet stores a date cell and a time cell; the config names
    both, read under `time_format`."""
    raw, ends = table()
    days = (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")
    whole = np.floor(days + 1e-9)
    raw.insert(0, "clock", [f"{v:.6f}" for v in days - whole])
    raw.insert(0, "day", [str(int(v)) for v in whole])
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "clock"], time_format=time_format)


@case
def serial_date_and_day_fraction_in_two_columns(folder):
    """Under a date format: refused, naming both fields and the count to set."""
    serial_date_and_day_fraction(folder, "%Y-%m-%d %H:%M")
    return "refused"


@case
def serial_date_and_day_fraction_under_days_since(folder):
    """Under "days since 1899-12-30": read as the one count the two cells make."""
    serial_date_and_day_fraction(folder, "days since 1899-12-30")


@case
def date_and_clock_as_the_last_two_columns(folder):
    raw, ends = table()
    raw["day"] = stamps(ends, "%d/%m/%Y")
    raw["clock"] = stamps(ends, "%H:%M")
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "clock"], time_format="%d/%m/%Y %H:%M")


# --------------------------------------------------------------------------- header lines
KEY_VALUES = ["site=Quillmoor T1 (fictional)", "logger=QX-9", "serial=4411",
              "interval=30 min", "timezone=CET"]


@case
def key_value_metadata_lines_above_the_header_declared(folder):
    p40.edited(folder, lambda text, raw: KEY_VALUES + text, rows_before_header=5)


@case
def key_value_metadata_lines_above_the_header_undeclared(folder):
    """Five "key=value" lines above the names, not declared: no line is a header."""
    p40.edited(folder, lambda text, raw: KEY_VALUES + text)
    return "refused"


@case
def units_after_a_slash_in_the_names_mapped_without_them(folder):
    """ "co2_net/umol m-2 s-1", the config naming "co2_net" (the name before the slash):
    refused as the bracketed form is (layouts40), the message naming the suffix."""
    raw, _ = table()
    raw.columns = [n if u == "-" else f"{n}/{u}" for n, u in zip(raw.columns, UNITS,
                                                                 strict=True)]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def utf16_little_endian_without_a_byte_order_mark(folder):
    """UTF-16 LE with no BOM: every other byte of the names a NUL."""
    raw, _ = table()
    write(folder / "t.csv", lines(raw), ending="\r\n", encoding="utf-16-le")
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- lines among records
def per_day(folder, between, ending="\n"):
    """The example with `between(day)` (a list of lines) before each day's records but the
    first's, the header first."""
    raw, ends = table()
    day = day_of(ends)
    text = lines(raw)[:1]
    for k, d in enumerate(sorted(set(day))):
        text += (between(d) if k else []) + lines(raw[day == d], header=False)
    write(folder / "t.csv", text, ending=ending)
    toml(folder, "t.csv")


@case
def blank_line_between_days(folder):
    per_day(folder, lambda d: [""])


@case
def header_written_again_above_every_day(folder):
    """Daily files joined by a shell's cat: the names above each day's 48 records."""
    per_day(folder, lambda d: [",".join(p38.NAMES.values())])


@case
def year_file_closed_by_its_totals(folder):
    """ "Total,<sums of the year's records>" as the last line (a spreadsheet's sum row)."""
    raw, _ = table()
    sums = p45.numbers(raw).replace(-9999, np.nan).sum()
    write(folder / "t.csv", lines(raw) + ["Total," + ",".join(f"{v:.2f}" for v in sums)])
    toml(folder, "t.csv")


@case
def year_file_closed_by_its_minima_and_maxima(folder):
    """ "Min,<...>" and "Max,<...>" as the last two lines: each value its column's extreme
    over the records, provably no record."""
    raw, _ = table()
    values = p45.numbers(raw).replace(-9999, np.nan)
    text = lines(raw)
    for label in ("Min", "Max"):
        text.append(label + "," + ",".join(f"{v:.3f}" for v in getattr(values, label.lower())()))
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def year_file_closed_by_a_line_of_other_values(folder):
    """ "Max,<...>" whose values are no column's extremes (the logger's limits): a word
    where the records have their stamp, so no record whatever its values (dropped with a
    note, layouts38; a warning where the word names no statistic)."""
    raw, _ = table()
    write(folder / "t.csv", lines(raw) + ["Max,50,1400,45,6,3,40,100,2"])
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- archives
@case
def zip_of_daily_files_each_with_its_header(folder):
    """A year's zip of 365 one-day CSVs (a logger's card export), no other member."""
    raw, ends = table()
    day = day_of(ends)
    members = [(f"quillmoor_{d:%Y%m%d}.csv", p40.plain_bytes(raw[day == d]))
               for d in sorted(set(day))]
    (folder / "t.zip").write_bytes(p40.zipped(members))
    toml(folder, "t.zip")


@case
def zip_of_daily_files_one_in_another_column_order(folder):
    """Twin: the zip's file of 1 March writes its columns in another order (a logger
    program changed): the first lines differ, refused naming the files."""
    raw, ends = table()
    day = day_of(ends)
    members = []
    for d in sorted(set(day)):
        part = raw[day == d]
        if f"{d}" == "2021-03-01":
            part = part[list(part.columns[:1]) + list(part.columns[1:][::-1])]
        members.append((f"quillmoor_{d:%Y%m%d}.csv", p40.plain_bytes(part)))
    (folder / "t.zip").write_bytes(p40.zipped(members))
    toml(folder, "t.zip")
    return "refused"


# --------------------------------------------------------------------------- numbers
def values_rewritten(folder, cell, **inputs):
    """The example with every value cell (not the stamp) as `cell` rewrites it."""
    raw, _ = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.map(cell))
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


def typeset_minus(value):
    return value.replace("-", "\u2212")


def quoted_decimal_comma(value):
    return f'"{value.replace(".", ",")}"' if "." in value else value


@case
def minus_signs_written_as_u2212(folder):
    """A typeset export: every minus of a value the Unicode minus sign U+2212, the
    missing code declared as the file spells it."""
    values_rewritten(folder, typeset_minus, missing=["\u22129999"])


@case
def minus_signs_written_as_u2212_missing_code_plain(folder):
    """The same with the missing code declared as the number -9999."""
    values_rewritten(folder, typeset_minus)


@case
def decimal_commas_quoted_in_a_comma_file_declared(folder):
    """German spreadsheet saved with commas between fields: "3,21" quoted; decimal=","."""
    values_rewritten(folder, quoted_decimal_comma, decimal=",")


@case
def decimal_commas_quoted_in_a_comma_file_undeclared(folder):
    """Twin: the same, the decimal sign not declared: "1,250" may be a thousand."""
    values_rewritten(folder, quoted_decimal_comma)
    return "refused"


@case
def estimated_values_marked_by_a_trailing_star(folder):
    """Values the logger estimated written "3.21*" in the mapped NEE column: what the star
    means is not in the file (refuse, naming column and row)."""
    raw, _ = table()
    at = raw.index[(raw.index % 97 == 5) & (raw["co2_net"] != "-9999")]
    raw.loc[at, "co2_net"] = raw.loc[at, "co2_net"] + "*"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def missing_as_minus_9999_point_0_in_some_columns_na_in_others(folder):
    """The logger writes "-9999.0" in its flux columns, its met module "NA"; the config
    declares only -9999: "-9999.0" is the code, "NA" a word refused naming the fix (as
    "N/A", layouts40: a word is the config's to declare)."""
    raw, _ = table()
    for column in ("co2_net", "fric_vel", "co2_grade"):
        raw.loc[raw[column] == "-9999", column] = "-9999.0"
    for column in ("sun_in", "air_c", "dryness", "soil_c", "humid"):
        raw.loc[raw[column] == "-9999", column] = "NA"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


def dates_on_first_records(folder, left_out=""):
    """The date written on each day's first record only (a sheet's merged date cells),
    the clock on every record, day `left_out` (ISO date) given no date at all."""
    raw, ends = table()
    starts = ends - pd.Timedelta("30min")
    day = stamps(starts, "%Y-%m-%d")
    first = ~starts.dt.date.duplicated().to_numpy()
    raw.insert(0, "clock", stamps(starts, "%H:%M"))
    raw.insert(0, "day", [d if f and d != left_out else "" for d, f in
                          zip(day, first, strict=True)])
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "clock"], time_format="%Y-%m-%d %H:%M",
         time_marks="start")


@case
def date_only_on_the_first_record_of_each_day(folder):
    """Merged date cells saved as CSV: read with the dates filled down (a note)."""
    dates_on_first_records(folder)


@case
def date_only_on_first_records_one_day_without_its_date(folder):
    """Twin: 1 March has no date at all: filled down, its records would repeat the stamps
    of 28 February (refused)."""
    dates_on_first_records(folder, "2021-03-01")
    return "refused"


def main():
    # judged as probe_layouts43.py judges its cases (probe_layouts39.judge)
    p43.CASES.update(CASES)
    p38.probe(CASES, p43.judge, "cases", 60)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
