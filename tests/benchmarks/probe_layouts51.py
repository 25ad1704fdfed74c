"""Probe: logger files as a tower writes them, not yet in probes 38-50 (round layouts51).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts51.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts50.py``;
none of their cases is repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, an export or a person might: column names in Portuguese and
in French (a semicolon file with decimal commas and a units line in parentheses), a units
line in parentheses or a line of statistics words under the header undeclared, a quality
flag after every value column (named for its value, or all named alike), every stamp one
second early (":29:59"), stamps at the interval's start under a config saying "end" (and
under none), a two-digit year and day of year joined ("21001") beside an integer HHMM, a
whole serial day beside a clock column, minutes since the start of the year, VPD in pascals
with thousands points in a semicolon file with decimal commas, every value in single quotes,
a footer of summary rows labelled in German, a closing "end of data" line, a second table of
daily values after the records, a line-type word opening every line, a UTC stamp column
beside the local one, a zip or a bzip2 file under a ".gz" name, a UTF-32 file with its
byte-order mark, LF CR line ends, a header in commas over records in semicolons or in
spaces over records in tabs, trailing minus signs, and a fixed-width file with a units
line. Its truth is the example's frame, the reading of a folder holding the same records in
one clean file, or ``"refused"`` where the file cannot tell the intent (one ``error:`` line
naming the cause: file, line or column). One line a case: ``right``, ``refused``, ``WRONG``
or ``CRASH``; the last line counts each class.
"""
import bz2
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
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts51-")))]
import probe_layouts38 as p38  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, write  # noqa: E402
from probe_layouts50 import canonical  # noqa: E402

from fluxpart.io import read_site_config  # noqa: E402

CASES = {}
#: a case whose file reads as declared and whose run must stop on the clock check
CLOCK = "clock"


def case(function):
    CASES[function.__name__] = function
    return function


def renamed(folder, names, sep=",", decimal=None, units_line=None, **inputs):
    """The example under other column `names` (example order, stamp first), written with
    `sep` and `decimal`, a units line under the header where given."""
    raw, _ = table()
    if decimal == ",":
        raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    mapping = dict(zip(raw.columns, names, strict=True))
    raw.columns = names
    text = lines(raw, sep=sep)
    if units_line:
        text[1:1] = [sep.join(units_line)]
        inputs["rows_after_header"] = 1
    write(folder / "t.csv", text)
    if sep != ",":
        inputs["delimiter"] = sep
    if decimal:
        inputs["decimal"] = decimal
    toml(folder, "t.csv", time_column=names[0],
         columns={k: mapping[v] for k, v in MAP.items()}, **inputs)


def with_lines(folder, edit, ending="\n", name="t.csv", opener=None, **inputs):
    """The example's lines as `edit(text)` changes them."""
    raw, _ = table()
    write(folder / name, edit(lines(raw)), ending=ending, opener=opener)
    toml(folder, name, **inputs)


def shifted_truth(shift):
    frame = p38.truth(None)
    frame.index = frame.index + pd.Timedelta(shift)
    return frame


# --------------------------------------------------------------------------- names and units
@case
def names_in_portuguese_with_cedilla_and_tilde(folder):
    renamed(folder, ["data_hora", "troca_líquida_co2", "radiação_global", "temperatura_do_ar",
                     "déficit_pressão_vapor", "velocidade_fricção", "temperatura_do_solo",
                     "umidade_relativa", "qualidade_co2"])


@case
def names_in_french_semicolons_decimal_commas_units_in_parentheses(folder):
    renamed(folder, ["horodatage", "échange_net_co2", "rayonnement_global", "température_air",
                     "déficit_saturation", "vitesse_de_frottement", "température_sol",
                     "humidité_relative", "qualité_co2"], sep=";", decimal=",",
            units_line=["(-)", "(µmol m-2 s-1)", "(W m-2)", "(°C)", "(kPa)", "(m s-1)",
                        "(°C)", "(%)", "(-)"])


@case
def units_line_in_parentheses_undeclared(folder):
    """A line "(-),(umol m-2 s-1),(W m-2),..." under the header, rows_after_header unset:
    read as a units line with a note, as the bracket form is, or refused naming line 2."""
    with_lines(folder, lambda t: t[:1] + [",".join(f"({u})" for u in UNITS)] + t[1:])


@case
def statistics_line_alone_under_the_header_undeclared(folder):
    """A line of the logger's statistics words ("Smp", "Avg", "Tot") under the header,
    no units line, rows_after_header unset."""
    with_lines(folder, lambda t: t[:1] + ["Smp,Avg,Avg,Avg,Avg,Avg,Avg,Avg,Smp"] + t[1:])


def flagged(names):
    """The example with a flag column after each of its seven measured columns."""
    raw, _ = table()
    out = raw[["stamp"]].copy()
    codes = np.array(["0", "1", "2"])
    for i, column in enumerate(raw.columns[1:8]):
        out[column] = raw[column]
        out[names[i]] = codes[(np.arange(len(raw)) + i) % 3]
    out["co2_grade"] = raw["co2_grade"]
    return out


@case
def a_flag_column_after_every_value_column(folder):
    """"co2_net_qc" after "co2_net", and so on (seven unmapped flag columns)."""
    raw, _ = table()
    write(folder / "t.csv", lines(flagged([c + "_qc" for c in raw.columns[1:8]])))
    toml(folder, "t.csv")


@case
def flag_columns_all_named_alike_after_every_value(folder):
    """Seven unmapped flag columns all named "qc": the mapped names are unique."""
    out = flagged([f"qc{i}" for i in range(7)])
    text = lines(out)
    for i in range(7):
        text[0] = text[0].replace(f"qc{i}", "qc")
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- stamps
@case
def every_stamp_one_second_early(folder):
    """A logger that stamps one second before the interval's end ("2021-01-01 00:29:59"),
    every record alike, under "%Y-%m-%d %H:%M:%S"."""
    p38.restamped(folder, lambda ends: stamps(ends - pd.Timedelta("1s"), "%Y-%m-%d %H:%M:%S"),
                  "%Y-%m-%d %H:%M:%S")


@case
def start_stamps_under_a_config_saying_end(folder):
    """The file stamps each record at its start (00:00 of 1 January to 23:30 of 31
    December), the config says "end" (a copied config): the file cannot say which, so
    it is read as the config says, the records half an hour early, and the run stops on
    the clock check (Rg half an hour before the sun), naming time_marks = "start"."""
    p38.restamped(folder, "%Y%m%d%H%M", shift="30min")
    return CLOCK, shifted_truth("-30min")


@case
def start_stamps_with_no_time_marks_key(folder):
    """The same file and a config that says neither (the default, documented, applies)."""
    p38.restamped(folder, "%Y%m%d%H%M", shift="30min")
    config = folder / "site.toml"
    config.write_text("\n".join(line for line in config.read_text().splitlines()
                                if not line.startswith("time_marks")) + "\n")
    return shifted_truth("-30min")


@case
def two_digit_year_and_day_of_year_joined_beside_integer_hhmm(folder):
    """"21001" (year of the century and day of year) and "30" for 00:30, "2400" closing
    each day."""
    raw, ends = table()
    starts = ends - pd.Timedelta("30min")
    day = np.where((ends.dt.hour == 0) & (ends.dt.minute == 0), starts.dt.strftime("%y%j"),
                   ends.dt.strftime("%y%j"))
    clock = np.where(day == ends.dt.strftime("%y%j"), ends.dt.hour * 100 + ends.dt.minute, 2400)
    raw.insert(0, "hhmm", [str(v) for v in clock])
    raw.insert(0, "yyddd", list(day))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["yyddd", "hhmm"], time_format="%y%j %H%M")


@case
def serial_day_number_beside_a_clock_column(folder):
    """A spreadsheet's whole day number ("44197") and a clock cell ("00:30"): the date
    cell saved as a number, the clock as text."""
    raw, ends = table()
    days = ((ends - pd.Timedelta("30min")).dt.normalize() - pd.Timestamp("1899-12-30")).dt.days
    clock = np.where(ends.dt.strftime("%H:%M") == "00:00", "24:00", ends.dt.strftime("%H:%M"))
    raw.insert(0, "clock", list(clock))
    raw.insert(0, "day", [str(v) for v in days])
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "clock"], time_format="%Y-%m-%d %H:%M")
    return "refused"


@case
def minutes_since_the_start_of_the_year(folder):
    """Each record's end in minutes since 2021-01-01 00:00 (30, 60, ... 525600)."""
    p38.restamped(folder, lambda ends: [str(v) for v in (ends - pd.Timestamp("2021-01-01"))
                                        // pd.Timedelta("1min")],
                  "minutes since 2021-01-01 00:00")


# --------------------------------------------------------------------------- numbers
@case
def vpd_in_pascals_with_thousands_points_semicolons_decimal_commas(folder):
    """VPD in Pa ("2.263,4" over 1000, "20,0" below) in a semicolon file with decimal
    commas; its truth is the same values written plainly."""
    raw, _ = table()
    vpd = pd.to_numeric(raw["dryness"])
    pa = np.where(vpd == -9999, -9999.0, vpd * 1000)
    plain = raw.copy()
    plain["dryness"] = [f"{v:.1f}" for v in pa]
    written = raw.copy()
    written.iloc[:, 1:] = written.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    written["dryness"] = [f"{v:,.1f}".replace(",", " ").replace(".", ",").replace(" ", ".")
                          for v in pa]
    write(folder / "t.csv", lines(written, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",", units={"vpd": "Pa"})
    return canonical(folder, plain, units={"vpd": "Pa"})


@case
def every_value_in_single_quotes(folder):
    """An export that marks every cell as text with single quotes ("'0.329'")."""
    with_lines(folder, lambda t: [",".join(f"'{c}'" for c in line.split(",")) for line in t])


@case
def trailing_minus_signs(folder):
    """Negative numbers with the sign after the digits ("0.103-"), an old report
    writer's form: refused naming the column and line."""
    raw, _ = table()
    for column in raw.columns[1:7]:
        negative = raw[column].str.startswith("-") & (raw[column] != "-9999")
        raw.loc[negative, column] = raw.loc[negative, column].str[1:] + "-"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


# --------------------------------------------------------------------------- lines
@case
def footer_rows_labelled_in_german(folder):
    """A semicolon file with decimal commas closed by "Mittelwert", "Minimum", "Maximum"
    and "Summe" rows of plausible values."""
    raw, _ = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    text = lines(raw, sep=";")
    text += [label + ";" + ";".join(["1,5", "210,3", "8,9", "0,4", "0,3", "9,1", "80,2", "0"])
             for label in ("Mittelwert", "Minimum", "Maximum", "Summe")]
    write(folder / "t.csv", text)
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def closing_end_of_data_line(folder):
    """A last line "*** END OF DATA ***" after the records."""
    with_lines(folder, lambda t: t + ["*** END OF DATA ***"])


@case
def second_table_of_daily_values_after_the_records(folder):
    """A blank line, then a table of daily values with its own header ("date,nee_day,
    rg_day") after the half-hourly records."""
    days = pd.date_range("2021-01-01", periods=365, freq="D").strftime("%Y-%m-%d")
    with_lines(folder, lambda t: t + ["", "date,nee_day,rg_day"]
               + [f"{d},-1.25,120.4" for d in days])


@case
def a_line_type_word_opening_every_line(folder):
    """"H" opening the header, "D" every record (a logger's line types)."""
    with_lines(folder, lambda t: ["H," + t[0]] + ["D," + line for line in t[1:]])


@case
def utc_stamp_column_beside_the_local_one(folder):
    """A "stamp_utc" column (an hour behind) beside the config's "stamp"."""
    raw, ends = table()
    raw.insert(1, "stamp_utc", stamps(ends - pd.Timedelta("1h"), "%Y%m%d%H%M"))
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- bytes
def zipped(data):
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("t.csv", data)
    return out.getvalue()


@case
def zip_archive_under_a_gz_name(folder):
    with_lines(folder, lambda t: t, name="t.csv.gz", opener=zipped)


@case
def bzip2_file_under_a_gz_name(folder):
    with_lines(folder, lambda t: t, name="t.csv.gz", opener=bz2.compress)


@case
def utf32_little_endian_with_bom(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw), encoding="utf-32")
    toml(folder, "t.csv")


@case
def lf_cr_line_ends(folder):
    """Every line ended by LF then CR (reversed pair)."""
    with_lines(folder, lambda t: t, ending="\n\r")


@case
def header_in_commas_records_in_semicolons(folder):
    """The header line (typed again by hand) in commas, the records in semicolons."""
    with_lines(folder, lambda t: t[:1] + [line.replace(",", ";") for line in t[1:]],
               delimiter=";")


@case
def header_in_spaces_records_in_tabs(folder):
    with_lines(folder, lambda t: [t[0].replace(",", " ")] + [line.replace(",", "\t")
                                                              for line in t[1:]],
               delimiter="\t")


@case
def fixed_width_with_a_units_line(folder):
    """Right-aligned columns 16 wide, a units line under the header, declared."""
    raw, _ = table()
    rows = [list(raw.columns), list(UNITS)] + raw.values.tolist()
    write(folder / "t.txt", ["".join(f"{c:>16}" for c in row) for row in rows])
    toml(folder, "t.txt", column_widths=[16] * 9, rows_after_header=1)


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts39.judge``, the reader notes shown beside the warnings."""
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    clock = isinstance(expected, tuple) and expected[0] == CLOCK
    expected = expected[1] if clock else expected
    refusal_due = isinstance(expected, str)

    def want():
        if isinstance(expected, Path):
            return read_site_config(expected / "site.toml").read()[0]
        return expected if isinstance(expected, pd.DataFrame) else p38.truth(None)

    def said(report):
        told = [*report.warnings, *report.notes]
        return f"{len(told)} note(s): " + "; ".join(w.splitlines()[0][-90:] for w in told)

    state = p38.reading_state(folder, want, said, refusal_due)
    if not cli or state[0] == "CRASH":
        return state
    if clock and state[0] == "right":
        code, _, err = p38.command("run", "site.toml", "--out", "out", "--quiet", cwd=folder)
        errors = [line for line in err.splitlines() if line.startswith("error:")]
        if code == 2 and len(errors) == 1 and 'time_marks = "start"' in errors[0]:
            return "refused", "read as declared; run stops: " + errors[0][:150]
        return "WRONG", f"run exit {code}, not stopped naming time_marks: {err[-150:]}"
    return p38.commands_agree(state, folder, base_tables if expected is None else {})


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
