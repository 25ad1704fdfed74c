"""Probe: a year's files as they arrive from the field, not yet in probes 38-49 (round layouts50).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts50.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts49.py``;
none of their cases is repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as month files sent in from the field, or as one file a person edited: a
column renamed from July when the logger program changed (declared as another name, and
not), the air temperature's unit changed to kelvin from July with a units line per file, the
previous December's file at the head of the list, a month sent twice (byte for byte other,
the same records; and again with one record corrected), the files listed in no order and
overlapping by a day, one month file with a title line the others lack (and the first file
so), a month file opening with its header line twice, one month file whose dates a
spreadsheet rewrote day first (and a twin of 1-12 March only, day and month first alike), a block of empty delimited lines closing a month file,
the humidity all missing in one month file, the air temperature written twice under one name
in one file, a header with trailing blanks and a trailing delimiter, a month file cut inside
its last stamp, a run of zero bytes in mid-file after a power cut (the logger writing on after
it), a month file with classic Mac line ends among Unix ones, quoted names with a blank inside
the quotes, spreadsheet error words and overflow words among the NEE values, exponents as
"E+" in a decimal-comma file, negative zeros, leading plus signs in one month file, a month
file re-saved with its no-value cells empty, a month file whose stamps a spreadsheet turned
into day numbers, and one NEE cell a person typed with a decimal comma. Its truth is the
example's frame (with the records a case loses missing), the reading of a folder holding the
same records in one clean file, or ``"refused"`` where the files cannot tell the intent (one
``error:`` line naming the cause: file, line or column). One line a case: ``right``,
``refused``, ``WRONG`` or ``CRASH``; the last line counts each class.
"""
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts50-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts39 as p39  # noqa: E402
from probe_layouts38 import UNITS, lines, stamps, table, toml, write  # noqa: E402

CASES = {}
ISO = "%Y-%m-%d %H:%M"


def case(function):
    CASES[function.__name__] = function
    return function


def month_of(ends):
    """The calendar month of each record (stamped at its end)."""
    return (ends - pd.Timedelta("30min")).dt.month.to_numpy()


def month_files(folder, edit=None, raw=None, ends=None, pattern="q_{:02d}.csv", **inputs):
    """The example as twelve month files; `edit(month, text_lines)` may rewrite a month's
    lines (a list of str) or return its bytes. The config reads them by a glob."""
    if raw is None:
        raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        text = lines(raw[month == m])
        out = edit(m, text) if edit else text
        path = folder / pattern.format(m)
        if isinstance(out, bytes):
            path.write_bytes(out)
        else:
            write(path, out)
    toml(folder, inputs.pop("path", pattern.replace("{:02d}", "*")), **inputs)
    return raw, ends


def canonical(folder, raw, **inputs):
    """A folder beside `folder` holding `raw` as one clean file: its reading is the truth."""
    clean = folder.parent / (folder.name + "_truth")
    clean.mkdir(exist_ok=True)
    write(clean / "t.csv", lines(raw))
    toml(clean, "t.csv", **inputs)
    return clean


def iso_table():
    raw, ends = table()
    raw["stamp"] = stamps(ends, ISO)
    return raw, ends


# --------------------------------------------------------------------------- names and units
def renamed_from_july(folder, declared):
    """Month files whose air temperature column is "air_c" to June and "t_air" from July
    (a new logger program)."""
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        part = raw[month == m]
        if m >= 7:
            part = part.rename(columns={"air_c": "t_air"})
        write(folder / f"q_{m:02d}.csv", lines(part))
    toml(folder, "q_*.csv")
    if declared:
        with open(folder / "site.toml", "a", encoding="utf-8") as config:
            config.write('\n[input.other_names]\ntair = ["t_air"]\n')


@case
def column_renamed_from_july_other_name_declared(folder):
    renamed_from_july(folder, True)


@case
def column_renamed_from_july_undeclared(folder):
    """Twin: the July to December files lack "air_c" (refused naming the column, a file)."""
    renamed_from_july(folder, False)
    return "refused"


@case
def air_in_kelvin_from_july_units_line_per_file(folder):
    """A units line in every month file; from July it says "K" and the air is in kelvin,
    the config declares degC: the settings and six files disagree (refused naming both)."""
    raw, ends = table()
    month = month_of(ends)
    present = (raw["air_c"] != "-9999") & (month >= 7)
    raw.loc[present, "air_c"] = [f"{v + 273.15:.2f}" for v in
                                 raw.loc[present, "air_c"].astype(float)]

    def edit(m, text):
        units = list(UNITS)
        units[3] = "K" if m >= 7 else "degC"
        return [text[0], ",".join(units)] + text[1:]

    month_files(folder, edit, raw, ends, rows_after_header=1,
                units={"vpd": "kPa", "tair": "degC"})
    return "refused"


# --------------------------------------------------------------------------- the list of files
@case
def previous_december_file_at_the_head_of_the_list(folder):
    """The list opens with last year's December file (the records before 1 January): read
    as 13 months."""
    raw, ends = table()
    december = raw[month_of(ends) == 12].copy()
    before = pd.to_datetime(december["stamp"], format="%Y%m%d%H%M") - pd.DateOffset(years=1)
    december["stamp"] = stamps(before, "%Y%m%d%H%M")
    write(folder / "d_2020_12.csv", lines(december))
    write(folder / "y_2021.csv", lines(raw))
    toml(folder, ["d_2020_12.csv", "y_2021.csv"])
    return canonical(folder, pd.concat([december, raw]))


@case
def same_month_sent_again_crlf_and_bom_same_records(folder):
    """May sent twice ("q_05.csv" and "q_05_resent.csv"), the second re-saved with CRLF and
    a byte order mark: the same records."""
    raw, ends = month_files(folder)
    part = raw[month_of(ends) == 5]
    write(folder / "q_05_resent.csv", lines(part), ending="\r\n", encoding="utf-8-sig")


def may_sent_again(folder, row):
    """Month files and May's file sent again as "q_05_resent.csv", the NEE of the first
    record after May's 300th whose NEE is missing (`row` 0) or measured (`row` 1)
    written -4.321; that record's place in the frame."""
    raw, ends = month_files(folder)
    part = raw[month_of(ends) == 5].copy()
    at = 300 + int(np.flatnonzero((part["co2_net"].to_numpy()[300:] == "-9999")
                                  == (row == 0))[0])
    part.iloc[at, 1] = "-4.321"
    write(folder / "q_05_resent.csv", lines(part))
    return int(np.flatnonzero(month_of(ends) == 5)[at])


@case
def same_month_sent_again_one_missing_value_recovered(folder):
    """May sent again with one NEE value the first file lacks (recovered from the
    logger's card): the value is read where the other file has none."""
    at = may_sent_again(folder, 0)
    frame = p38.truth(None)
    frame.iloc[at, frame.columns.get_loc("nee")] = -4.321
    return frame


@case
def same_month_sent_again_one_value_corrected(folder):
    """May sent again with one measured NEE value corrected by hand: which of the two
    values is the record's cannot be told (refused naming both files and the stamp)."""
    may_sent_again(folder, 1)
    return "refused"


@case
def files_listed_in_no_order_overlapping_a_day(folder):
    """Twelve month files listed by hand in no order, each opening with the last day of the
    month before."""
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        rows = np.flatnonzero(month == m)
        rows = np.arange(max(rows[0] - 48, 0), rows[-1] + 1)
        write(folder / f"q_{m:02d}.csv", lines(raw.iloc[rows]))
    order = [7, 2, 12, 1, 9, 4, 11, 3, 6, 10, 5, 8]
    toml(folder, [f"q_{m:02d}.csv" for m in order])


@case
def one_month_file_with_a_title_line_the_others_lack(folder):
    """March was exported by hand: a title line above its header."""
    month_files(folder, lambda m, text: (["Quillmoor T1 export March 2021 (fictional)"]
                                         if m == 3 else []) + text)


@case
def first_month_file_with_a_title_line_the_others_lack(folder):
    """Twin: January, the first file, holds the added title line."""
    month_files(folder, lambda m, text: (["Quillmoor T1 export January 2021 (fictional)"]
                                         if m == 1 else []) + text)


@case
def one_month_file_with_its_header_line_written_twice(folder):
    """August's file opens with its header line twice (two exports pasted together)."""
    month_files(folder, lambda m, text: text[:1] * (m == 8) + text)


@case
def one_month_file_with_dates_rewritten_day_first(folder):
    """A spreadsheet opened and saved March: "2021-03-04 00:30" became "04/03/2021 00:30"
    in that file only. Day first is provable (days 13 to 31 in the first field, every
    stamp continuing February's and April's)."""
    raw, ends = iso_table()
    march = month_of(ends) == 3
    raw.loc[march, "stamp"] = stamps(ends[march], "%d/%m/%Y %H:%M")
    month_files(folder, None, raw, ends, time_format=ISO)


@case
def one_month_file_of_twelve_days_with_dates_rewritten_day_first(folder):
    """Twin: a March file of 1-12 March only, rewritten day first: every stamp reads day
    first and month first alike (refused naming the layout)."""
    raw, ends = iso_table()
    march = month_of(ends) == 3
    raw.loc[march, "stamp"] = stamps(ends[march], "%d/%m/%Y %H:%M")
    early = ~march | (ends.dt.day <= 12).to_numpy()        # the last stamp 12/03 23:30
    month_files(folder, None, raw[early], ends[early], time_format=ISO)
    return "refused"


@case
def block_of_empty_delimited_lines_closing_a_month_file(folder):
    month_files(folder, lambda m, text: text + [",,,,,,,,"] * (40 if m == 4 else 0))


@case
def humidity_all_missing_in_one_month_file(folder):
    """The humidity sensor was away in June: an empty cell all month."""
    raw, ends = table()
    june = month_of(ends) == 6
    raw.loc[june, "humid"] = ""
    month_files(folder, None, raw, ends)
    frame = p38.truth(None)
    frame.loc[june, "rh"] = np.nan
    return frame


@case
def air_temperature_written_twice_under_one_name_in_one_file(folder):
    """September's file holds a second "air_c" (a second sensor added under the same name,
    other values): which one is meant cannot be told (refused naming the column, the
    file)."""
    raw, ends = table()
    month = month_of(ends)
    for m in range(1, 13):
        part = raw[month == m].copy()
        if m == 9:
            part.insert(4, "air_c", part["air_c"].str.replace(r"^(-?)", r"\g<1>1", regex=True),
                        allow_duplicates=True)
        write(folder / f"q_{m:02d}.csv", lines(part))
    toml(folder, "q_*.csv")
    return "refused"


@case
def header_with_trailing_blanks_and_a_trailing_delimiter(folder):
    def edit(text, raw):
        text[0] = ",".join(n + "  " for n in raw.columns) + ","
        return text

    p38.edited(folder, edit)


@case
def month_file_cut_inside_its_last_stamp(folder):
    """March's file ends inside its last record's stamp ("2021040100", no line end): the
    last record is lost."""
    raw, ends = month_files(folder, lambda m, text: ("\n".join(text[:-1]) + "\n"
                                                    + text[-1][:10]).encode() if m == 3
                             else text)
    return np.arange(len(raw)) == np.flatnonzero(month_of(ends) == 3)[-1]


@case
def zero_bytes_mid_file_after_a_power_cut_logger_wrote_on(folder):
    """A power cut in August: the last record cut and 2048 zero bytes (the blocks the file
    system had given), then the logger wrote on, from its next record."""
    raw, ends = table()
    text = lines(raw)
    cut = int(np.flatnonzero(ends == pd.Timestamp("2021-08-14 12:00"))[0]) + 1
    data = ("\n".join(text[:cut]) + "\n" + text[cut][:17]).encode() + b"\0" * 2048
    data += ("\n".join(text[cut + 1:]) + "\n").encode()
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")
    return np.arange(len(raw)) == cut - 1


@case
def one_month_file_with_classic_mac_line_ends(folder):
    month_files(folder, lambda m, text: ("\r".join(text) + "\r").encode() if m == 10
                else text)


@case
def quoted_names_with_a_blank_inside_the_quotes(folder):
    def edit(text, raw):
        text[0] = ",".join(f'"{n} "' for n in raw.columns)
        return text

    p38.edited(folder, edit)


# --------------------------------------------------------------------------- values
def nee_words(folder, words, missing=None):
    """Every 200th present NEE value written as one of `words` in turn."""
    raw, _ = table()
    present = np.flatnonzero(raw["co2_net"].to_numpy() != "-9999")[::200]
    raw.loc[raw.index[present], "co2_net"] = [words[i % len(words)]
                                              for i in range(len(present))]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **({"missing": missing} if missing else {}))
    return np.isin(np.arange(len(raw)), present)


@case
def spreadsheet_error_words_in_nee_undeclared(folder):
    """ "#VALUE!" and "#DIV/0!" in NEE cells (a spreadsheet's formula errors), no missing
    code declaring them: refused naming the column and the words."""
    nee_words(folder, ["#VALUE!", "#DIV/0!"])
    return "refused"


@case
def spreadsheet_error_words_in_nee_declared(folder):
    """Twin: missing = [-9999, "#VALUE!", "#DIV/0!"]: those NEE values missing."""
    gone = nee_words(folder, ["#VALUE!", "#DIV/0!"], [-9999, "#VALUE!", "#DIV/0!"])
    frame = p38.truth(None)
    frame.loc[gone, "nee"] = np.nan
    return frame


@case
def overflow_inf_and_quiet_nan_words_in_nee_undeclared(folder):
    """ "overflow", "inf", "NaN" and "1.#QNAN" among the NEE values: "overflow" and "inf"
    are no value the file declares (refused naming the column)."""
    nee_words(folder, ["overflow", "inf", "NaN", "1.#QNAN"])
    return "refused"


@case
def capital_e_plus_exponents_in_a_decimal_comma_file(folder):
    """ "1,234500E+01" in a semicolon file with decimal commas (a German spreadsheet's
    scientific format)."""
    raw, _ = table()
    for column in raw.columns[1:8]:
        values = pd.to_numeric(raw[column])
        raw[column] = [("-9999" if v == -9999 else f"{v:.6E}".replace(".", ","))
                       for v in values]
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def negative_zeros(folder):
    """Rg written "-0", "-0.0" or "-0.00" where it is zero, NEE "-0.000" (signed zeros of
    a logger's rounding)."""
    raw, _ = table()
    forms = np.array(["-0", "-0.0", "-0.00"])
    at = pd.to_numeric(raw["sun_in"]) == 0
    raw.loc[at, "sun_in"] = forms[np.arange(int(at.sum())) % 3]
    at = pd.to_numeric(raw["co2_net"]) == 0
    raw.loc[at, "co2_net"] = "-0.000"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def leading_plus_signs_in_one_month_file(folder):
    """A spreadsheet's "+0.00" number format on November's positive values."""
    raw, ends = table()
    nov = month_of(ends) == 11
    for column in raw.columns[1:8]:
        cells = raw.loc[nov, column]
        positive = ~cells.str.startswith("-") & (cells != "-9999")
        raw.loc[nov & positive.reindex(raw.index, fill_value=False).to_numpy(),
                column] = "+" + cells[positive]
    month_files(folder, None, raw, ends)


@case
def one_month_file_resaved_with_empty_no_value_cells(folder):
    """February re-saved by a spreadsheet: its -9999 cells written empty."""
    raw, ends = table()
    feb = month_of(ends) == 2
    raw.loc[feb] = raw.loc[feb].replace("-9999", "")
    month_files(folder, None, raw, ends)


@case
def one_month_file_stamps_turned_into_day_numbers(folder):
    """A spreadsheet saved July's stamps as its day numbers ("44378.020833"): the other
    files' format does not read them (refused naming the file and a stamp)."""
    raw, ends = iso_table()
    july = month_of(ends) == 7
    raw.loc[july, "stamp"] = p38.serial_days(ends[july])
    month_files(folder, None, raw, ends, time_format=ISO)
    return "refused"


@case
def one_nee_cell_typed_with_a_decimal_comma(folder):
    """A person corrected one NEE value in a spreadsheet set to a German locale: the cell
    is written "-3,25" in quotes in a comma file; its line and column are named
    (refused)."""
    raw, _ = table()
    raw.iloc[5000, 1] = '"-3,25"'
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def one_month_file_resaved_with_an_index_column(folder):
    """June re-saved by a data frame library with its row numbers as a first column without
    a name."""
    month_files(folder, lambda m, text: [("," + line if i == 0 else f"{i - 1}," + line)
                                         for i, line in enumerate(text)] if m == 6 else text)


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts39.judge``."""
    p39.CASES[name] = CASES[name]
    return p39.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
