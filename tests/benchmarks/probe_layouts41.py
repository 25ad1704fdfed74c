"""Probe: more logger layouts a tower or a data portal hands over (round layouts41).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts41.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` and ``probe_layouts40.py``;
none of the cases of ``probe_layouts38.py``, ``39`` or ``40`` is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might: a record number before the stamp, stamps over a date
and a time column in other forms, a day of the year without a year, quarter-hour records,
two NEE columns, names written twice or differing by case, empty and unnamed columns,
remarks after the last field, signs and exponents, digit grouping in a count, units after
numbers, tabs for empty fields, UTF-16 with a byte-order mark, gzip twice or not at all.
Its truth is the example's frame (cells a case leaves out missing), or ``"refused"`` where
no reading is right without the user's word (one ``error:`` line is due). One line a case:
``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts each class.
"""
import gzip
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts41-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
from probe_layouts38 import MAP, lines, stamps, table, toml, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def stamp_split(folder, cells, time_format, name="t.csv", sep=",", **inputs):
    """The example with its stamp written as the columns `cells(ends)` returns (a dict)."""
    raw, ends = table()
    for column, values in reversed(list(cells(ends).items())):
        raw.insert(0, column, values)
    write(folder / name, lines(raw.drop(columns="stamp"), sep=sep))
    toml(folder, name, time_column=list(cells(ends)), time_format=time_format, **inputs)


def saved(folder, raw, name="t.csv", sep=",", **inputs):
    """`raw` written to folder/`name` with fields split by `sep`, read with `inputs`."""
    write(folder / name, lines(raw, sep=sep))
    toml(folder, name, **({"delimiter": sep} if sep != "," else {}) | inputs)


def counted(folder, form, sep=",", name="t.csv", **inputs):
    """The example with an unmapped count column "n_samples" of 17000-18000 written as
    `form(count)`, its other cells as `sep` and `inputs` (a decimal comma) write them."""
    raw, _ = table()
    if inputs.get("decimal") == ",":
        raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    rng = np.random.default_rng(41)
    raw.insert(8, "n_samples", [form(v) for v in rng.integers(17000, 18001, len(raw))])
    saved(folder, raw, name, sep, **inputs)


def added(folder, position, name, values, **inputs):
    """The example with a column `name` of `values` inserted at `position`."""
    raw, _ = table()
    raw.insert(position, name, values, allow_duplicates=True)
    saved(folder, raw, **inputs)


def numbers(raw, columns, form):
    """`raw` with the numbers of `columns` (not -9999) written as `form(value)`."""
    for column in columns:
        values = pd.to_numeric(raw[column])
        raw[column] = [c if c == "-9999" else form(v, c)
                       for v, c in zip(values, raw[column], strict=True)]
    return raw


#: a case's truth: the example's frame without its last record (a last line cut short,
#: dropped with a warning as docs/logger-files.md says)
LAST_DROPPED = "last record dropped"
VALUE_COLUMNS = ["co2_net", "sun_in", "air_c", "dryness", "fric_vel", "soil_c", "humid"]


# --------------------------------------------------------------------------- stamps
@case
def record_number_first_stamp_second(folder):
    added(folder, 0, "rec_no", [str(i) for i in range(len(table()[0]))])


@case
def date_and_padded_hhmm_time(folder):
    stamp_split(folder, lambda ends: {"day": stamps(ends, "%Y-%m-%d"),
                                      "hhmm": stamps(ends, "%H%M")}, "%Y-%m-%d %H%M")


@case
def date_slashes_day_first_and_clock_with_seconds(folder):
    stamp_split(folder, lambda ends: {"day": stamps(ends, "%d/%m/%Y"),
                                      "clock": stamps(ends, "%H:%M:%S")},
                "%d/%m/%Y %H:%M:%S")


@case
def date_and_seconds_of_day(folder):
    stamp_split(folder, lambda ends: {
        "day": stamps(ends, "%Y-%m-%d"),
        "sec_of_day": [str(v) for v in ends.dt.hour * 3600 + ends.dt.minute * 60]},
        "%Y-%m-%d %H:%M")
    return "refused"


@case
def year_doy_hour_minute_four_columns(folder):
    stamp_split(folder, lambda ends: {k: stamps(ends, f) for k, f in
                                      (("yr", "%Y"), ("doy", "%j"), ("hr", "%H"),
                                       ("mn", "%M"))}, "%Y %j %H %M")


@case
def doy_and_hhmm_year_only_in_file_name(folder):
    stamp_split(folder, lambda ends: {"doy": stamps(ends, "%j"), "hhmm": stamps(ends, "%H%M")},
                "%j %H%M", name="quillmoor_2021.csv")
    return "refused"


@case
def date_and_clock_with_h_between(folder):
    stamp_split(folder, lambda ends: {"day": stamps(ends, "%Y-%m-%d"),
                                      "clock": stamps(ends, "%Hh%M")}, "%Y-%m-%d %Hh%M")


@case
def two_blanks_between_date_and_clock(folder):
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d  %H:%M")
    saved(folder, raw, time_format="%Y-%m-%d %H:%M")


@case
def quarter_hour_records(folder):
    """Each half-hour's record written as two quarter-hours (a 15-minute logger)."""
    raw, ends = table()
    early = raw.copy()
    early["stamp"] = stamps(ends - pd.Timedelta("15min"), "%Y%m%d%H%M")
    both = pd.concat([early, raw]).iloc[np.argsort(np.r_[np.arange(len(raw)) * 2,
                                                         np.arange(len(raw)) * 2 + 1])]
    saved(folder, both)
    return "refused"


# --------------------------------------------------------------------------- columns and names
@case
def two_nee_columns_raw_one_mapped(folder):
    raw, _ = table()
    values = pd.to_numeric(raw["co2_net"])
    raw.insert(1, "co2_raw", np.where(values == -9999, "-9999",
                                      [f"{v * 0.9 + 0.3:.3f}" for v in values]))
    saved(folder, raw)


@case
def two_nee_columns_storage_corrected_mapped(folder):
    raw, _ = table()
    values = pd.to_numeric(raw["co2_net"])
    raw.insert(2, "co2_net_stor", raw["co2_net"])
    raw["co2_net"] = np.where(values == -9999, "-9999", [f"{v - 0.4:.3f}" for v in values])
    saved(folder, raw, columns=MAP | {"nee": "co2_net_stor"})


@case
def name_written_twice_unmapped_sensor(folder):
    added(folder, 5, "spare_t", ["12.5"] * len(table()[0]))
    text = (folder / "t.csv").read_text().splitlines()
    text[0] = text[0].replace("spare_t", "air_c")
    write(folder / "t.csv", text)
    return "refused"


@case
def names_differing_only_by_case(folder):
    raw, _ = table()
    raw.insert(4, "AIR_C", raw["air_c"].str.replace(r"^(-?\d)", r"\g<1>1", regex=True))
    saved(folder, raw)


@case
def mapped_names_in_another_case(folder):
    raw, _ = table()
    raw.columns = [c.upper() for c in raw.columns]
    saved(folder, raw)
    return "refused"


@case
def empty_last_column_with_a_name(folder):
    added(folder, 9, "remarks", [""] * len(table()[0]))


@case
def empty_unnamed_column_in_the_middle(folder):
    added(folder, 4, "", [""] * len(table()[0]))


@case
def count_column_with_thousands_separators_quoted(folder):
    counted(folder, lambda v: f'"{v:,}"')


@case
def count_column_with_thousands_separators_tab_file(folder):
    counted(folder, lambda v: f"{v:,}", sep="\t", name="t.txt")


@case
def count_column_point_grouped_in_decimal_comma_file(folder):
    """An unmapped count grouped with points ("17.523") beside decimal commas."""
    counted(folder, lambda v: f"{v:,}".replace(",", "."), sep=";", decimal=",")


# --------------------------------------------------------------------------- fields
@case
def remark_after_the_last_field(folder):
    def edit(text, raw):
        return [line + (" # batt low" if i % 97 == 5 else "") for i, line in enumerate(text)]

    p40.edited(folder, edit)


@case
def remark_after_the_last_field_with_a_comma(folder):
    def edit(text, raw):
        return [line + (",# batt low" if i % 97 == 5 else "") for i, line in enumerate(text)]

    p40.edited(folder, edit)


@case
def exponents_lower_case_and_plus_signs_mixed(folder):
    raw, _ = table()
    forms = [lambda v: f"{v:.4e}", lambda v: f"{v:+g}", lambda v: f"{v:.6E}"]
    raw = numbers(raw, VALUE_COLUMNS, lambda v, c: c if len(c) > 8 else
                  forms[int(abs(v) * 1000) % 3](float(c)))
    saved(folder, raw)


@case
def numbers_with_a_trailing_unit(folder):
    raw, _ = table()
    raw = numbers(raw, ["air_c", "soil_c"], lambda v, c: c + "C")
    saved(folder, raw)
    return "refused"


@case
def percent_sign_after_humidity(folder):
    raw, _ = table()
    raw = numbers(raw, ["humid"], lambda v, c: c + "%")
    saved(folder, raw)
    return "refused"


@case
def semicolon_decimal_point_delimiter_undeclared(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv")
    return "refused"


@case
def tab_file_double_tabs_for_empty_fields(folder):
    raw, _ = table()
    raw = raw.replace("-9999", "")
    saved(folder, raw, "t.txt", "\t")


@case
def tab_file_records_cut_after_last_value(folder):
    """Missing flags at a record's end written as nothing, not even the tab."""
    raw, _ = table()
    text = lines(raw, sep="\t")
    cut = np.zeros(len(raw), dtype=bool)
    cut[100::53] = True
    for i in np.flatnonzero(cut):
        text[i + 1] = text[i + 1].rsplit("\t", 1)[0]
    write(folder / "t.txt", text)
    toml(folder, "t.txt", delimiter="\t")
    return "refused"   # a record cut short may hold a value cut mid-number


@case
def crlf_last_line_cut_without_end(folder):
    raw, _ = table()
    text = lines(raw)
    text[-1] = text[-1][:12]
    (folder / "t.csv").write_bytes("\r\n".join(text).encode())
    toml(folder, "t.csv")
    return LAST_DROPPED


@case
def leading_zeros_and_plus_on_every_value(folder):
    raw, _ = table()
    raw = numbers(raw, VALUE_COLUMNS, lambda v, c: ("-" if c.startswith("-") else "+")
                  + c.lstrip("-").rjust(8, "0"))
    saved(folder, raw)


# --------------------------------------------------------------------------- encodings, archives
@case
def utf16_big_endian_with_bom_comma_crlf(folder):
    raw, _ = table()
    data = b"\xfe\xff" + ("\r\n".join(lines(raw)) + "\r\n").encode("utf-16-be")
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")


@case
def utf16_little_endian_with_bom_semicolon(folder):
    raw, _ = table()
    data = b"\xff\xfe" + ("\n".join(lines(raw, sep=";")) + "\n").encode("utf-16-le")
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv", delimiter=";")


@case
def gzip_twice(folder):
    data = gzip.compress(gzip.compress(p40.plain_bytes(), mtime=0), mtime=0)
    (folder / "t.csv.gz.gz").write_bytes(data)
    toml(folder, "t.csv.gz.gz")


@case
def gzip_twice_named_once(folder):
    data = gzip.compress(gzip.compress(p40.plain_bytes(), mtime=0), mtime=0)
    (folder / "t.csv.gz").write_bytes(data)
    toml(folder, "t.csv.gz")


@case
def gzip_named_csv(folder):
    (folder / "t.csv").write_bytes(gzip.compress(p40.plain_bytes(), mtime=0))
    toml(folder, "t.csv")


@case
def gz_name_on_plain_crlf_bom_file(folder):
    (folder / "t.dat.gz").write_bytes(b"\xef\xbb\xbf" + p40.plain_bytes(ending="\r\n"))
    toml(folder, "t.dat.gz")


@case
def record_number_and_stamp_quoted_with_units_line(folder):
    def edit(text, raw):
        out = ['"rec_no",' + ",".join(f'"{n}"' for n in text[0].split(",")),
               '"",' + ",".join(f'"{u}"' for u in p38.UNITS)]
        out += [f'{i},"{line.split(",", 1)[0]}",{line.split(",", 1)[1]}'
                for i, line in enumerate(text[1:])]
        return out

    p40.edited(folder, edit, rows_after_header=1)


@case
def monthly_files_each_in_another_order_and_case_of_extension(folder):
    raw, ends = table()
    rng = np.random.default_rng(41)
    for month, part in p38.months(raw, ends):
        order = ["stamp"] + list(rng.permutation(list(part.columns[1:])))
        write(folder / f"q_{month:02d}.{'CSV' if month % 2 else 'csv'}", lines(part[order]))
    toml(folder, "q_*.[cC][sS][vV]")


# --------------------------------------------------------------------------- more of the kinds
@case
def cr_cr_lf_line_ends(folder):
    """CRLF turned into CR CR LF by a second conversion on a transfer."""
    p40.edited(folder, ending="\r\r\n")


@case
def names_differing_only_by_a_trailing_blank(folder):
    raw, _ = table()
    raw.insert(4, "air_c ", raw["air_c"].str.replace(r"^(-?\d)", r"\g<1>1", regex=True),
               allow_duplicates=True)
    saved(folder, raw)
    return "refused"


@case
def upper_case_copy_mapped(folder):
    raw, _ = table()
    raw.insert(4, "AIR_C", raw["air_c"])
    raw["air_c"] = raw["air_c"].str.replace(r"^(-?\d)", r"\g<1>1", regex=True)
    saved(folder, raw, columns=MAP | {"tair": "AIR_C"})


@case
def flags_written_as_exponents(folder):
    raw, _ = table()
    raw["co2_grade"] = [f"{int(v):.1E}" for v in raw["co2_grade"]]
    saved(folder, raw)


@case
def count_column_grouped_with_no_break_spaces(folder):
    counted(folder, lambda v: f"{v:,}".replace(",", "\u00a0"))


@case
def gzip_of_a_zip_of_one_table(folder):
    data = gzip.compress(p40.zipped([("quillmoor_2021.csv", p40.plain_bytes())]), mtime=0)
    (folder / "t.zip.gz").write_bytes(data)
    toml(folder, "t.zip.gz")


@case
def zip_of_one_gzipped_table(folder):
    data = p40.zipped([("quillmoor_2021.csv.gz", gzip.compress(p40.plain_bytes(), mtime=0))])
    (folder / "t.zip").write_bytes(data)
    toml(folder, "t.zip")


def judge(name, folder, base_tables, cli):
    """The case's state as ``probe_layouts40.judge`` finds it (a returned pair of rows and
    variables is the cells the file leaves out, missing in the truth)."""
    if CASES[name](folder) == LAST_DROPPED:
        state = p38.reading_state(folder, lambda: p38.truth(None).iloc[:-1],
                                  lambda report: f"{len(report.warnings)} w: "
                                  + report.warnings[0][:120])
        return state if not cli or state[0] == "CRASH" else p38.commands_agree(state, folder, {})
    p40.CASES[name] = CASES[name]
    return p40.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 58)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
