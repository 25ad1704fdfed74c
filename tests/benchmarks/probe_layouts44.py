"""Probe: more logger layouts a tower or a data portal hands over (round layouts44).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts44.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts43.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might: month abbreviations of French and Spanish (and German
in ``probe_layouts43.py``), ISO week dates, e-mail style stamps, a zone suffix "UTC+1",
zeros of fractional seconds the format does not declare; a redundant day-of-year column,
a time-zone line above the header, a line of dashes under it, a config naming the time
column as empty or by a reader's internal name; thousands separators in a mapped column,
leading "+" in a decimal-comma file, Fortran "D" exponents, infinities, negatives in
parentheses; a 300-column file read for six, trailing tabs in runs, a gzip of a UTF-16
file, Windows-1252 "µ" in names, a 3-column flux file beside its drivers' file, duplicate
names, summary rows with plausible values. Its truth is the example's frame, or
``"refused"`` where no reading is right without the user's word (one ``error:`` line is
due). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts
each class.
"""
import gzip
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts44-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts39 as p39  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts41 as p41  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
from probe_layouts38 import MAP, lines, stamps, table, toml, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


VALUE_COLUMNS = p41.VALUE_COLUMNS


# --------------------------------------------------------------------------- stamps
FRENCH_MONTHS = ["janv.", "févr.", "mars", "avr.", "mai", "juin", "juil.", "août", "sept.",
                 "oct.", "nov.", "déc."]
SPANISH_MONTHS = ["ene", "feb", "mar", "abr", "may", "jun", "jul", "ago", "sep", "oct", "nov",
                  "dic"]


@case
def month_abbreviations_in_french(folder):
    """As a French-language spreadsheet writes "05-déc.-2023 00:30"."""
    p38.restamped(folder, lambda ends: [f"{s.day:02d}-{FRENCH_MONTHS[s.month - 1]}-{s:%Y %H:%M}"
                                        for s in ends], "%d-%b-%Y %H:%M")


@case
def month_abbreviations_in_spanish(folder):
    p38.restamped(folder, lambda ends: [f"{s.day:02d}-{SPANISH_MONTHS[s.month - 1]}-{s:%Y %H:%M}"
                                        for s in ends], "%d-%b-%Y %H:%M")


@case
def iso_week_dates(folder):
    """ISO 8601 week dates: "2021-W22-2 00:30" (year, week, weekday)."""
    p38.restamped(folder, "%G-W%V-%u %H:%M")


@case
def email_style_stamps_with_offset(folder):
    """RFC 5322 date-times: "Tue, 01 Jun 2021 00:30:00 +0100" (the site's standard time)."""
    p38.restamped(folder, lambda ends: [f'"{s:%a, %d %b %Y %H:%M:%S} +0100"' for s in ends],
                  "%a, %d %b %Y %H:%M:%S %z")


@case
def zone_suffix_utc_plus_one_in_stamps(folder):
    """ "2021-06-01 00:30 UTC+1" with the format naming the date and clock only."""
    p38.restamped(folder, lambda ends: [s + " UTC+1" for s in stamps(ends, "%Y-%m-%d %H:%M")],
                  "%Y-%m-%d %H:%M")
    return "refused"      # the suffix is an offset: the user adds %z to the format


@case
def zone_suffix_utc_plus_one_read_under_percent_z(folder):
    p38.restamped(folder, lambda ends: [s + " UTC+1" for s in stamps(ends, "%Y-%m-%d %H:%M")],
                  "%Y-%m-%d %H:%M %z")


@case
def zero_fractional_seconds_not_in_the_format(folder):
    """ "01.06.2021 00:30:00.000" read with "%d.%m.%Y %H:%M:%S"."""
    p38.restamped(folder, lambda ends: [s + ".000" for s in stamps(ends, "%d.%m.%Y %H:%M:%S")],
                  "%d.%m.%Y %H:%M:%S")


@case
def two_digit_years_with_month_abbreviations(folder):
    p38.restamped(folder, "%d-%b-%y %H:%M")


@case
def redundant_day_of_year_column_disagreeing_in_one_row(folder):
    """An unmapped "jday" column beside the stamp, one row off by a day."""
    raw, ends = table()
    doy = (ends - pd.Timedelta("30min")).dt.day_of_year.astype(str).tolist()
    doy[4000] = str(int(doy[4000]) + 1)
    raw.insert(1, "jday", doy)
    p41.saved(folder, raw)


@case
def time_zone_line_above_the_header_undeclared(folder):
    p40.edited(folder, lambda text, raw: ["time zone,UTC+1"] + text)
    return "refused"


@case
def time_zone_line_above_the_header_declared(folder):
    p40.edited(folder, lambda text, raw: ["time zone,UTC+1"] + text, rows_before_header=1)


@case
def line_of_dashes_under_the_header(folder):
    """A pretty-printed export: "-----,------,..." between the names and the records."""
    def edit(text, raw):
        text[1:1] = [",".join("-" * len(n) for n in raw.columns)]
        return text

    p40.edited(folder, edit)
    return "refused"      # named: a line under the header, rows_after_header = 1


def unnamed_stamp_column(folder, time_column):
    """The example with its stamp column's header cell empty, read as `time_column`."""
    raw, _ = table()
    write(folder / "t.csv", lines(raw.rename(columns={"stamp": ""})))
    toml(folder, "t.csv", time_column=time_column)
    return "refused"


@case
def time_column_set_empty_for_an_unnamed_stamp_column(folder):
    return unnamed_stamp_column(folder, "")   # named: the empty header cell and the fix


@case
def time_column_named_by_a_readers_internal_name(folder):
    """A stamp column without a name, mapped as "Unnamed: 0", pandas' name for it."""
    return unnamed_stamp_column(folder, "Unnamed: 0")


# --------------------------------------------------------------------------- numbers
@case
def thousands_separators_in_a_mapped_column_quoted(folder):
    """A PPFD column (umol m-2 s-1, past 1000 at noon) written "1,912.4", quoted."""
    raw, _ = table()
    raw = raw.rename(columns={"sun_in": "par_in"})
    raw = p41.numbers(raw, ["par_in"], lambda v, c: f"{v * 2.04:.1f}")
    columns = {k: v for k, v in MAP.items() if k != "rg"} | {"ppfd": "par_in"}
    home = p39.canonical(folder, raw, columns=columns)
    raw = p41.numbers(raw, ["par_in"], lambda v, c: f'"{v:,.1f}"' if v >= 1000 else c)
    p41.saved(folder, raw, columns=columns)
    return home


@case
def leading_plus_in_a_semicolon_decimal_comma_file(folder):
    raw, _ = table()
    raw = p41.numbers(raw, VALUE_COLUMNS, lambda v, c: ("+" + c if v > 0 else c))
    raw = raw.apply(lambda c: c.str.replace(".", ",", regex=False))
    p41.saved(folder, raw, sep=";", decimal=",")


@case
def fortran_d_exponents(folder):
    raw, _ = table()
    raw = p41.numbers(raw, VALUE_COLUMNS, lambda v, c: f"{v:.6E}".replace("E", "D"))
    p41.saved(folder, raw)


@case
def fortran_d_exponents_lower_case(folder):
    raw, _ = table()
    raw = p41.numbers(raw, ["co2_net"], lambda v, c: f"{v:.5e}".replace("e", "d"))
    p41.saved(folder, raw)


@case
def infinity_written_for_an_overflow(folder):
    raw, _ = table()
    raw.loc[6001, "co2_net"] = "INF"
    p41.saved(folder, raw)
    frame = p38.truth(None)
    frame.iloc[6001, frame.columns.get_loc("nee")] = np.nan
    return frame          # an overflow is no value: read as missing and named


@case
def negatives_in_parentheses(folder):
    """Accounting style "(3.212)" for -3.212 in the NEE column."""
    raw, _ = table()
    raw = p41.numbers(raw, ["co2_net"], lambda v, c: f"({c[1:]})" if v < 0 else c)
    p41.saved(folder, raw)
    return "refused"


@case
def summary_rows_with_plausible_values(folder):
    """ "mean" and "total" rows after the records, their values in range."""
    raw, _ = table()
    values = raw.iloc[:, 1:].apply(pd.to_numeric).replace(-9999, np.nan)
    text = lines(raw) + ["mean," + ",".join(f"{v:.3f}" for v in values.mean()),
                         "total," + ",".join(f"{v:.3f}" for v in values.sum())]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- shape
@case
def very_wide_file_read_for_its_mapped_columns(folder):
    """300 columns: the example's nine among 291 of other sensors."""
    raw, _ = table()
    rng = np.random.default_rng(44)
    extra = pd.DataFrame(rng.normal(size=(len(raw), 291)).round(3).astype(str),
                         columns=[f"aux_{i:03d}" for i in range(291)])
    wide = pd.concat([extra.iloc[:, :150], raw, extra.iloc[:, 150:]], axis=1)
    p41.saved(folder, wide)


@case
def tab_file_three_trailing_tabs_every_line(folder):
    p40.edited(folder, lambda text, raw: [line + "\t\t\t" for line in text], sep="\t",
               delimiter="\t")


@case
def gzip_of_a_utf16_file_with_a_bom(folder):
    raw, _ = table()
    write(folder / "t.csv.gz", lines(raw), ending="\r\n", encoding="utf-16",
          opener=lambda d: gzip.compress(d, mtime=0))
    toml(folder, "t.csv.gz")


@case
def cp1252_micro_in_header_names_undeclared(folder):
    raw, _ = table()
    raw = raw.rename(columns={"co2_net": "co2_net [µmol m-2 s-1]"})
    write(folder / "t.csv", lines(raw), encoding="cp1252")
    toml(folder, "t.csv", columns=MAP | {"nee": "co2_net [µmol m-2 s-1]"})
    return "refused"      # not UTF-8: the user names the encoding


@case
def cp1252_micro_in_header_names_declared(folder):
    raw, _ = table()
    raw = raw.rename(columns={"co2_net": "co2_net [µmol m-2 s-1]"})
    write(folder / "t.csv", lines(raw), encoding="cp1252")
    toml(folder, "t.csv", columns=MAP | {"nee": "co2_net [µmol m-2 s-1]"}, encoding="cp1252")


@case
def three_column_flux_file_beside_a_semicolon_drivers_file(folder):
    flux, met = p39.flux_and_met(folder, names=None)
    write(folder / "flux.csv", lines(flux[["stamp", "co2_net", "fric_vel"]]))
    write(folder / "drivers.csv", lines(met, sep=";"))
    toml(folder, ["flux.csv", "drivers.csv"], delimiter=";",
         columns={k: v for k, v in MAP.items() if k != "nee_flag"})
    return "refused"      # one delimiter setting for both files


@case
def three_column_flux_file_beside_its_drivers_file(folder):
    flux, met = p39.flux_and_met(folder, names=None)
    write(folder / "flux.csv", lines(flux[["stamp", "co2_net", "fric_vel"]]))
    write(folder / "drivers.csv", lines(met))
    toml(folder, ["flux.csv", "drivers.csv"],
         columns={k: v for k, v in MAP.items() if k != "nee_flag"})
    frame = p38.truth(None)
    return frame.drop(columns="nee_flag")


@case
def duplicate_names_config_names_the_second_by_its_suffix(folder):
    """Two "air_c" columns, the config naming "air_c.1" (a reader's name for the second)."""
    raw, _ = table()
    raw.insert(3, "air_c", "12.5", allow_duplicates=True)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", columns=MAP | {"tair": "air_c.1"})
    return "refused"      # "air_c.1" is the parser's name, not the file's


@case
def two_nee_columns_the_second_an_exact_copy(folder):
    raw, _ = table()
    raw.insert(2, "co2_net_copy", raw["co2_net"])
    p41.saved(folder, raw)


def main():
    # judged as probe_layouts43.py judges its cases (probe_layouts39.judge)
    p43.CASES.update(CASES)
    p38.probe(CASES, p43.judge, "cases", 58)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
