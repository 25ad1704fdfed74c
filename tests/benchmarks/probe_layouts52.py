"""Probe: logger files as a tower writes them, not yet in probes 38-51 (round layouts52).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts52.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts51.py``;
none of their cases is repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, an export or a person might: clocks written with a dot
("00.30"), unpadded, or with "24:00:00"; ISO basic stamps with an offset; six stamp
columns down to the second; a year, day of year and decimal hour; two-digit years in ISO
order or day first with 24:00; each day's midnight record dated with the day it closes;
the stamp form changing mid-file; stamps without a year; a half-hour period number (1-48)
beside the date; cells written as spreadsheet text formulas (``="0.329"``); values below a
detection limit ("<0.5"); VPD in pascals grouped by narrow no-break spaces or apostrophes;
missing-value words in several languages; an unsigned 9999 code; cells of blanks; CRLF and
LF alternating; UTF-16 with mixed line ends; the header written again mid-file with its
columns reordered or after a blank line; a second header line of names in another
language; gzipped daily files overlapping by one record; a zip holding the table and a
plot; a gzipped tar of month files; names in Polish (cp1250) and Japanese (Shift JIS);
a stamp with a comma inside its quotes. Its truth is the example's frame, the reading of a
folder holding the same records in one clean file, or ``"refused"`` where the file cannot
tell the intent (one ``error:`` line naming the cause: file, line or column). A case whose
truth is a frame may also be refused with a clear cause (``refused``, not ``WRONG``). One
line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts each class.
"""
import gzip
import io
import os
import sys
import tarfile
import traceback
import zipfile
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts52-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
from probe_layouts38 import MAP, lines, stamps, table, toml, write  # noqa: E402
from probe_layouts50 import canonical  # noqa: E402

from fluxpart.io import read_site_config  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def with_lines(folder, edit, ending="\n", name="t.csv", encoding="utf-8", opener=None,
               **inputs):
    """The example's lines as `edit(text)` changes them."""
    raw, _ = table()
    write(folder / name, edit(lines(raw)), ending=ending, encoding=encoding, opener=opener)
    toml(folder, name, **inputs)


def renamed(folder, names, written, **inputs):
    """The example under other column `names` (example order, stamp first), in the
    encoding `written`."""
    raw, _ = table()
    mapping = dict(zip(raw.columns, names, strict=True))
    raw.columns = names
    write(folder / "t.csv", lines(raw), encoding=written)
    toml(folder, "t.csv", time_column=names[0],
         columns={k: mapping[v] for k, v in MAP.items()}, **inputs)


def pascals(folder, grouped, sep=",", decimal=None):
    """VPD in Pa, values of 1000 Pa and more grouped by `grouped(text)`; its truth the
    same values written plainly."""
    raw, _ = table()
    vpd = pd.to_numeric(raw["dryness"])
    pa = np.where(vpd == -9999, -9999.0, vpd * 1000)
    plain = raw.copy()
    plain["dryness"] = [f"{v:.1f}" for v in pa]
    written = raw.copy()
    if decimal == ",":
        written.iloc[:, 1:] = written.iloc[:, 1:].apply(
            lambda c: c.str.replace(".", ",", regex=False))
    written["dryness"] = [grouped(f"{v:,.1f}") for v in pa]
    write(folder / "t.csv", lines(written, sep=sep))
    inputs = {"delimiter": sep} if sep != "," else {}
    if decimal:
        inputs["decimal"] = decimal
    toml(folder, "t.csv", units={"vpd": "Pa"}, **inputs)
    return canonical(folder, plain, units={"vpd": "Pa"})


# --------------------------------------------------------------------------- stamps
@case
def date_with_dots_and_clock_with_a_dot(folder):
    """"01.01.2021" and "00.30" in two columns (a Nordic locale's clock)."""
    p40.stamp_columns(folder, lambda ends: {"pvm": stamps(ends, "%d.%m.%Y"),
                                            "klo": stamps(ends, "%H.%M")}, "%d.%m.%Y %H.%M")


@case
def unpadded_day_month_and_hour_with_dots_one_column(folder):
    """"1.1.2021 0.30" (day, month and hour without leading zeros)."""
    p38.restamped(folder, lambda ends: [f"{s.day}.{s.month}.{s.year} {s.hour}.{s.minute:02d}"
                                        for s in ends], "%d.%m.%Y %H.%M")


@case
def midnight_record_dated_with_the_day_it_closes(folder):
    """Each day's last record stamped "00:00" under that day's date (a logger writing the
    interval's date and its end clock): 2021-01-01 00:00 is the record ending on 2 January;
    read as written it would sit at the day's start. Refused naming the stamps' order."""
    p38.restamped(folder, lambda ends: [
        ((s - pd.Timedelta("30min")).strftime("%Y-%m-%d") + " 00:00")
        if (s.hour, s.minute) == (0, 0) else s.strftime("%Y-%m-%d %H:%M") for s in ends],
        "%Y-%m-%d %H:%M")
    return "refused"


@case
def iso_basic_stamps_with_an_offset(folder):
    """"20210101T003000+0100" (ISO 8601 basic format)."""
    p38.restamped(folder, "%Y%m%dT%H%M%S+0100", "%Y%m%dT%H%M%S%z")


@case
def six_columns_year_to_second(folder):
    p40.stamp_columns(folder, lambda ends: {k: stamps(ends, f) for k, f in (
        ("y", "%Y"), ("mo", "%m"), ("d", "%d"), ("h", "%H"), ("mi", "%M"), ("s", "%S"))},
        "%Y %m %d %H %M %S")


@case
def year_day_of_year_and_decimal_hour(folder):
    """"2021,1,0.5" (year, day of year, decimal hour)."""
    p40.stamp_columns(folder, lambda ends: {
        "year": stamps(ends, "%Y"), "doy": stamps(ends, "%j"),
        "hour": [f"{v:.1f}" for v in ends.dt.hour + ends.dt.minute / 60]}, "%Y %j %H")


@case
def two_digit_year_in_iso_order(folder):
    p38.restamped(folder, "%y-%m-%d %H:%M")


@case
def date_and_clock_24_00_00_with_seconds(folder):
    p40.closing_days(folder, {"date": "%Y-%m-%d"}, lambda ends: ends.dt.strftime("%H:%M:%S"),
                     "24:00:00", "%Y-%m-%d %H:%M:%S")


@case
def two_digit_year_day_first_with_24_00(folder):
    p40.closing_days(folder, {"date": "%d.%m.%y"}, lambda ends: ends.dt.strftime("%H:%M"),
                     "24:00", "%d.%m.%y %H:%M")


@case
def five_columns_hour_24_closing_each_day(folder):
    """Year, month, day of the interval's start, hour 24 and minute 0 closing each day."""
    def cells(ends):
        start = ends - pd.Timedelta("30min")
        midnight = ((ends.dt.hour == 0) & (ends.dt.minute == 0)).to_numpy()
        return {"y": stamps(start, "%Y"), "mo": stamps(start, "%m"), "d": stamps(start, "%d"),
                "h": list(np.where(midnight, "24", ends.dt.strftime("%H"))),
                "mi": list(np.where(midnight, "00", ends.dt.strftime("%M")))}

    p40.stamp_columns(folder, cells, "%Y %m %d %H %M")


@case
def stamp_form_changes_mid_file(folder):
    """ISO stamps to June, then "dd/mm/YYYY HH:MM" (a logger program changed): refused
    naming the first stamp that does not read."""
    p38.restamped(folder, lambda ends: [
        s.strftime("%Y-%m-%d %H:%M") if s.month < 7 else s.strftime("%d/%m/%Y %H:%M")
        for s in ends], "%Y-%m-%d %H:%M")
    return "refused"


@case
def stamps_without_a_year_year_in_a_title_line(folder):
    """"Year 2021" above the header and stamps "01-01 00:30": refused (no year)."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%m-%d %H:%M")
    write(folder / "t.csv", ["Year 2021"] + lines(raw))
    toml(folder, "t.csv", time_format="%m-%d %H:%M", rows_before_header=1)
    return "refused"


@case
def half_hour_period_number_beside_the_date(folder):
    """A date and the half-hour's number in the day (1-48), as settlement data write
    it: no strptime field reads it, refused naming the stamp column or its cell."""
    def cells(ends):
        start = ends - pd.Timedelta("30min")
        return {"date": stamps(start, "%Y-%m-%d"),
                "period": [str(v) for v in start.dt.hour * 2 + start.dt.minute // 30 + 1]}

    p40.stamp_columns(folder, cells, "%Y-%m-%d %H")
    return "refused"


@case
def two_digit_year_under_a_four_digit_format(folder):
    """"21-01-01 00:30" read under "%Y-%m-%d %H:%M" (a copied config): refused, never
    the year 21."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%y-%m-%d %H:%M")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M")
    return "refused"


def month_words(folder, names):
    """Stamps "01-<month word>-2021 00:30" with the month words `names` (January first)."""
    p38.restamped(folder, lambda ends: [f"{s.day:02d}-{names[s.month - 1]}-{s.year} "
                                        f"{s.hour:02d}:{s.minute:02d}" for s in ends],
                  "%d-%b-%Y %H:%M")


@case
def month_abbreviations_in_italian(folder):
    """Read right or refused naming the stamp, never another month."""
    month_words(folder, ["gen", "feb", "mar", "apr", "mag", "giu", "lug", "ago", "set", "ott",
                         "nov", "dic"])


@case
def month_abbreviations_in_dutch(folder):
    month_words(folder, ["jan", "feb", "mrt", "apr", "mei", "jun", "jul", "aug", "sep", "okt",
                         "nov", "dec"])


@case
def weekday_in_german_before_the_date(folder):
    """"Fr 01.01.2021 00:30" under "%a %d.%m.%Y %H:%M"."""
    days = ["Mo", "Di", "Mi", "Do", "Fr", "Sa", "So"]
    p38.restamped(folder, lambda ends: [days[s.weekday()] + s.strftime(" %d.%m.%Y %H:%M")
                                        for s in ends], "%a %d.%m.%Y %H:%M")


@case
def restart_header_then_clock_reset_to_the_logger_epoch(folder):
    """A restart in July wrote the header again and its clock began at 1990-01-01 00:30:
    refused naming the stamps (the later records cannot be placed)."""
    raw, ends = table()
    july = int(np.flatnonzero((ends - pd.Timedelta("30min")).dt.month == 7)[0])
    reset = pd.Series(pd.date_range("1990-01-01 00:30", periods=len(raw) - july, freq="30min"))
    after = raw.iloc[july:].copy()
    after["stamp"] = stamps(reset, "%Y%m%d%H%M")
    write(folder / "t.csv", lines(raw.iloc[:july]) + lines(after))
    toml(folder, "t.csv")
    return "refused"


@case
def a_line_of_column_numbers_under_the_header(folder):
    """"1,2,3,...,9" under the header (a logger numbering its columns), undeclared."""
    with_lines(folder, lambda t: t[:1] + [",".join(str(i) for i in range(1, 10))] + t[1:])


@case
def a_line_of_column_numbers_under_a_header_of_unix_seconds(folder):
    """The same over Unix-time stamps: "1" reads as a stamp of 1970, so the line must be
    refused or read past, never kept as a record."""
    raw, ends = table()
    raw["stamp"] = p38.unix_seconds(ends - pd.Timedelta("1h"))
    write(folder / "t.csv", lines(raw)[:1] + [",".join(str(i) for i in range(1, 10))]
          + lines(raw)[1:])
    toml(folder, "t.csv", time_format="seconds since 1970-01-01 00:00:00 UTC")


@case
def unix_milliseconds_declared_as_seconds(folder):
    """Unix time in milliseconds under "seconds since 1970-01-01": refused, never read."""
    p38.restamped(folder, lambda ends: [str(v * 1000) for v in (
        ends - pd.Timedelta("1h") - pd.Timestamp("1970-01-01")) // pd.Timedelta("1s")],
                  "seconds since 1970-01-01 00:00:00 UTC")
    return "refused"


@case
def spreadsheet_days_declared_as_days_since_1970(folder):
    """Spreadsheet day numbers (1900 system) under "days since 1970-01-01" (a copied
    config): every stamp 70 years late (2091), refused, never read."""
    p38.restamped(folder, p38.serial_days, "days since 1970-01-01")
    return "refused"


@case
def minutes_since_the_year_declared_as_hours(folder):
    """Minutes since 2021-01-01 under "hours since 2021-01-01": 30-hour steps, refused."""
    p38.restamped(folder, lambda ends: [str(v) for v in (ends - pd.Timestamp("2021-01-01"))
                                        // pd.Timedelta("1min")],
                  "hours since 2021-01-01 00:00")
    return "refused"


@case
def stamp_quoted_with_a_comma_inside(folder):
    """"2021-01-01, 00:30" in double quotes (a comma between date and clock)."""
    p38.restamped(folder, lambda ends: ['"' + s + '"' for s in stamps(ends, "%Y-%m-%d, %H:%M")],
                  "%Y-%m-%d, %H:%M")


# --------------------------------------------------------------------------- numbers
@case
def cells_written_as_spreadsheet_text_formulas(folder):
    """Every cell written ="0.329" (a script's way to keep a spreadsheet from reformatting
    it): read without the formula, or refused naming it."""
    with_lines(folder, lambda t: t[:1] + [",".join(f'="{c}"' for c in line.split(","))
                                          for line in t[1:]])


@case
def stamps_alone_as_text_formulas_semicolons_decimal_commas(folder):
    """Only the stamp written ="202101010030" (to keep its digits), in a semicolon file of
    decimal commas."""
    raw, _ = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    raw["stamp"] = '="' + raw["stamp"] + '"'
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",")


@case
def values_below_a_detection_limit(folder):
    """"<0.5" for small night Rg (a sensor's detection limit): refused naming the cell."""
    raw, _ = table()
    rg = pd.to_numeric(raw["sun_in"])
    raw.loc[(rg.abs() < 0.5) & (rg != -9999), "sun_in"] = "<0.5"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def vpd_pascals_grouped_by_narrow_no_break_spaces_semicolons(folder):
    """"2\u202f263,4" (a French locale's grouping) in a semicolon file of decimal commas."""
    return pascals(folder, lambda s: s.replace(",", "\u202f").replace(".", ","), sep=";",
                   decimal=",")


@case
def vpd_pascals_grouped_by_apostrophes(folder):
    """"2'263.4" (a Swiss locale's grouping) in a comma file."""
    return pascals(folder, lambda s: s.replace(",", "'"))


@case
def decimal_comma_declared_file_writes_points(folder):
    """A semicolon file of decimal points under decimal = "," (a copied config): read right
    (no value holds a comma) or refused, never "0.329" as 329."""
    with_lines(folder, lambda t: [line.replace(",", ";") for line in t], delimiter=";",
               decimal=",")


@case
def missing_words_in_several_languages_undeclared(folder):
    p40.missing_words(folder, ["fehlt", "manquant", "mancante", "falta", "brak"])
    return "refused"


@case
def missing_words_in_several_languages_declared(folder):
    words = ["fehlt", "manquant", "mancante", "falta", "brak"]
    p40.missing_words(folder, words, missing=[-9999, *words])


@case
def unsigned_9999_missing_code_config_says_minus(folder):
    """The file writes 9999 where the config says -9999: refused (Rg, VPD out of range)."""
    p40.missing_words(folder, ["9999"])
    return "refused"


@case
def cells_of_blanks_for_no_value(folder):
    """Cells of three blanks ("   ") where a value is missing."""
    p40.missing_words(folder, ["   "])


# --------------------------------------------------------------------------- lines
@case
def crlf_and_lf_alternating(folder):
    raw, _ = table()
    text = lines(raw)
    data = "".join(line + ("\r\n" if i % 2 else "\n") for i, line in enumerate(text))
    (folder / "t.csv").write_bytes(data.encode())
    toml(folder, "t.csv")


@case
def utf16_with_bom_crlf_then_lf(folder):
    raw, _ = table()
    text = lines(raw, sep="\t")
    data = "\r\n".join(text[:9000]) + "\r\n" + "\n".join(text[9000:]) + "\n"
    (folder / "t.txt").write_bytes(data.encode("utf-16"))
    toml(folder, "t.txt", delimiter="\t")


@case
def header_again_mid_file_columns_reordered(folder):
    """A logger program changed in July: the header written again with air and soil
    temperature swapped, the records after it in the new order. Read by the new header,
    or refused naming the line."""
    raw, ends = table()
    july = int(np.flatnonzero((ends - pd.Timedelta("30min")).dt.month == 7)[0])
    after = raw.iloc[july:][["stamp", "co2_net", "sun_in", "soil_c", "dryness", "fric_vel",
                             "air_c", "humid", "co2_grade"]]
    write(folder / "t.csv", lines(raw.iloc[:july]) + lines(after))
    toml(folder, "t.csv")


@case
def header_again_mid_file_after_a_blank_line(folder):
    with_lines(folder, lambda t: t[:9000] + ["", t[0]] + t[9000:])


@case
def second_header_line_of_names_in_another_language(folder):
    """English names, then the same names in German, rows_after_header unset: read past
    or refused naming line 2, never a record."""
    with_lines(folder, lambda t: t[:1] + ["Zeit,CO2-Austausch,Globalstrahlung,Lufttemperatur,"
                                          "Saettigungsdefizit,Schubspannung,Bodentemperatur,"
                                          "Feuchte,Guete"] + t[1:])


@case
def trailing_semicolon_utf16_crlf_decimal_commas(folder):
    raw, _ = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    write(folder / "t.csv", [line + ";" for line in lines(raw, sep=";")], ending="\r\n",
          encoding="utf-16")
    toml(folder, "t.csv", delimiter=";", decimal=",")


# --------------------------------------------------------------------------- files
@case
def gzipped_daily_files_overlapping_by_one_record(folder):
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.day_of_year.to_numpy()
    for d in range(1, 366):
        rows = np.flatnonzero(day == d)
        rows = np.arange(rows[0], min(rows[-1] + 2, len(raw)))
        data = ("\n".join(lines(raw.iloc[rows])) + "\n").encode()
        (folder / f"d{d:03d}.csv.gz").write_bytes(gzip.compress(data, mtime=0))
    toml(folder, "d*.csv.gz")


@case
def zip_holding_the_table_and_a_plot(folder):
    """The table and a PNG plot of it in one zip: the one table read, or refused naming
    the members."""
    raw, _ = table()
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("t.csv", "\n".join(lines(raw)) + "\n")
        archive.writestr("nee_plot.png", b"\x89PNG\r\n\x1a\n" + bytes(200))
    (folder / "t.zip").write_bytes(buffer.getvalue())
    toml(folder, "t.zip")


@case
def gzipped_tar_of_month_files(folder):
    """Twelve month files in one .tar.gz: read one after another, or refused naming the
    members."""
    raw, ends = table()
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode="w:gz") as archive:
        for month, part in p38.months(raw, ends):
            data = ("\n".join(lines(part)) + "\n").encode()
            info = tarfile.TarInfo(f"q_{month:02d}.csv")
            info.size, info.mtime = len(data), 0
            archive.addfile(info, io.BytesIO(data))
    (folder / "t.tar.gz").write_bytes(buffer.getvalue())
    toml(folder, "t.tar.gz")


@case
def tar_of_daily_files_one_with_a_changed_header(folder):
    """Daily files in a .tar, the header of day 200 naming air temperature "t_air": not
    one layout, refused naming the files."""
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.day_of_year.to_numpy()
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode="w") as archive:
        for d in range(1, 366):
            part = raw[day == d]
            if d == 200:
                part = part.rename(columns={"air_c": "t_air"})
            data = ("\n".join(lines(part)) + "\n").encode()
            info = tarfile.TarInfo(f"day_{d:03d}.csv")
            info.size, info.mtime = len(data), 0
            archive.addfile(info, io.BytesIO(data))
    (folder / "t.tar").write_bytes(buffer.getvalue())
    toml(folder, "t.tar")
    return "refused"


@case
def names_in_polish_cp1250_declared(folder):
    renamed(folder, ["czas", "wymiana_netto_co2", "promieniowanie_całkowite", "temp_powietrza",
                     "deficyt_wilgotności", "prędkość_tarcia", "temp_gleby",
                     "wilgotność_względna", "jakość_co2"], "cp1250", encoding="cp1250")


@case
def names_in_japanese_shift_jis_declared(folder):
    renamed(folder, ["時刻", "正味CO2交換", "日射", "気温", "飽差", "摩擦速度", "地温", "相対湿度",
                     "品質"], "shift_jis", encoding="shift_jis")


@case
def names_in_japanese_shift_jis_undeclared(folder):
    """Not UTF-8, no encoding set: read right or refused naming the encoding."""
    renamed(folder, ["時刻", "正味CO2交換", "日射", "気温", "飽差", "摩擦速度", "地温", "相対湿度",
                     "品質"], "shift_jis")


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts51.judge`` without its clock cases."""
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    refusal_due = isinstance(expected, str)

    def want():
        if isinstance(expected, Path):
            return read_site_config(expected / "site.toml").read()[0]
        return p38.truth(None)

    def said(report):
        told = [*report.warnings, *report.notes]
        return f"{len(told)} note(s): " + "; ".join(w.splitlines()[0][-90:] for w in told)

    state = p38.reading_state(folder, want, said, refusal_due)
    if not cli or state[0] == "CRASH":
        return state
    return p38.commands_agree(state, folder, base_tables if expected is None else {})


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
