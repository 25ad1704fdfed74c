"""Probe: still more logger layouts a tower or a data portal hands over (round layouts43).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts43.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts42.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a station might: stamps with the time as an integer without a colon
after a date with slashes, a date and separate hour and minute columns, the zone's
abbreviation on every line (CET/CEST), compact stamps with a "T" or with seconds, a
12-hour clock whose AM/PM follows a narrow no-break space, month names of another
language; the header written again at each of several restarts (with and without a units
line), records newest first with a units line or in a gzip, a day's records appended
late, a day written twice, daily files sharing the midnight record, two year files in
other column orders; fixed-width exports (declared, with blank cells, read as
whitespace); a header opened by a comment mark, written twice, blank lines above it;
units in names against the config; a mapped driver's column all missing; 10- and
5-minute records, a day of 15-minute records; tar, 7z, .ods, .xls and workbooks named
.csv. Its truth is the example's frame (cells a case leaves out missing), or
``"refused"`` where no reading is right without the user's word (one ``error:`` line is
due). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts
each class.
"""
import gzip
import io
import os
import sys
import tarfile
from datetime import timezone
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts43-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts39 as p39  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts41 as p41  # noqa: E402
import probe_layouts42 as p42  # noqa: E402
from probe_layouts38 import MAP, UNITS, lines, stamps, table, toml, truth, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def civil(ends):
    """The example's end stamps on the civil clock of Central Europe (aware)."""
    utc = (ends - pd.Timedelta("1h")).dt.tz_localize(timezone.utc)
    return utc.dt.tz_convert(ZoneInfo("Europe/Berlin"))


def without(column):
    """The example's frame with the variable `column` missing throughout."""
    frame = truth(None)
    frame[column] = np.nan
    return frame


# --------------------------------------------------------------------------- stamps
@case
def year_slash_date_and_hhmm_without_colon_one_column(folder):
    p38.restamped(folder, "%Y/%m/%d %H%M")


@case
def date_then_hour_then_minute_columns(folder):
    p41.stamp_split(folder, lambda ends: {"date": stamps(ends, "%Y-%m-%d"),
                                          "hour": [str(h) for h in ends.dt.hour],
                                          "minute": [str(m) for m in ends.dt.minute]},
                    "%Y-%m-%d %H %M")


@case
def zone_abbreviation_on_every_line_cet_cest(folder):
    p38.restamped(folder, lambda ends: list(civil(ends).dt.strftime("%Y-%m-%d %H:%M %Z")),
                  "%Y-%m-%d %H:%M %Z")


@case
def zone_abbreviation_in_a_column_of_its_own(folder):
    p41.stamp_split(folder, lambda ends: {"local": list(civil(ends).dt.strftime("%d.%m.%Y %H:%M")),
                                          "zone": list(civil(ends).dt.strftime("%Z"))},
                    "%d.%m.%Y %H:%M %Z")


@case
def compact_stamps_with_a_t(folder):
    p38.restamped(folder, "%Y%m%dT%H%M")


@case
def compact_stamps_with_seconds(folder):
    p38.restamped(folder, "%Y%m%d%H%M%S")


@case
def twelve_hour_clock_am_pm_after_a_narrow_no_break_space(folder):
    """A stamp as recent spreadsheet and system locales write it: "6/1/2021 12:30\u202fAM"."""
    p38.restamped(folder, lambda ends: [f"{s.month}/{s.day}/{s.year} {int(s.strftime('%I'))}:"
                                        f"{s:%M}\u202f{s:%p}" for s in ends], "%m/%d/%Y %I:%M %p")


@case
def date_and_clock_joined_by_a_no_break_space(folder):
    p38.restamped(folder, lambda ends: [s.replace(" ", "\u00a0") for s in
                                        stamps(ends, "%Y-%m-%d %H:%M")], "%Y-%m-%d %H:%M")


GERMAN_MONTHS = ["Jan", "Feb", "Mär", "Apr", "Mai", "Jun", "Jul", "Aug", "Sep", "Okt", "Nov",
                 "Dez"]


@case
def month_abbreviations_in_german(folder):
    p38.restamped(folder, lambda ends: [f"{s.day:02d}-{GERMAN_MONTHS[s.month - 1]}-{s:%Y %H:%M}"
                                        for s in ends], "%d-%b-%Y %H:%M")
    # refused in round layouts43 (%b reads the C locale's names); read since layouts44


# --------------------------------------------------------------------------- headers again
def restarts(text, at, block):
    """`text` with the lines `block` written again before each line number of `at`."""
    for line in sorted(at, reverse=True):
        text[line:line] = list(block)
    return text


@case
def header_written_again_at_six_restarts(folder):
    p40.edited(folder, lambda text, raw: restarts(text, (1500, 4000, 7200, 9000, 12000, 16000),
                                                  text[:1]))


@case
def header_and_units_written_again_at_four_restarts(folder):
    def edit(text, raw):
        text[1:1] = [",".join(UNITS)]
        return restarts(text, (3000, 6000, 9000, 15000), text[:2])

    p40.edited(folder, edit, rows_after_header=1)


@case
def header_written_twice_at_the_top(folder):
    p40.edited(folder, lambda text, raw: text[:1] + text)


@case
def header_opened_by_a_comment_mark(folder):
    p40.edited(folder, lambda text, raw: ["# " + text[0]] + text[1:])


@case
def header_opened_by_a_comment_mark_blank_separated(folder):
    """numpy.savetxt's default: blanks between fields, the header after "# "."""
    p40.edited(folder, lambda text, raw: ["# " + text[0].replace(",", " ")]
               + [line.replace(",", " ") for line in text[1:]], delimiter="whitespace")


@case
def stamp_column_without_a_name_as_pandas_writes_an_index(folder):
    """``DataFrame.to_csv()`` of a frame indexed by time: the index column unnamed."""
    p40.edited(folder, lambda text, raw: ["," + text[0].split(",", 1)[1]] + text[1:])
    return "refused"      # no name to map: name the column in a copy (the fix is due)


@case
def blank_lines_above_the_header_undeclared(folder):
    p40.edited(folder, lambda text, raw: ["", ""] + text)


# --------------------------------------------------------------------------- record order
@case
def newest_first_with_a_units_line(folder):
    p40.edited(folder, lambda text, raw: text[:1] + [",".join(UNITS)] + text[1:][::-1],
               rows_after_header=1)


@case
def newest_first_semicolons_in_a_gzip(folder):
    raw, _ = table()
    text = lines(raw, sep=";")
    write(folder / "t.csv.gz", text[:1] + text[1:][::-1], opener=lambda d: gzip.compress(d, mtime=0))
    toml(folder, "t.csv.gz", delimiter=";")


@case
def a_late_day_appended_after_the_last_record(folder):
    """A day read late from the logger's card, appended at the end of the file."""
    def edit(text, raw):
        day = text[1 + 4000:1 + 4048]
        return text[:1 + 4000] + text[1 + 4048:] + day

    p40.edited(folder, edit)


@case
def a_day_written_twice_in_a_row(folder):
    p40.edited(folder, lambda text, raw: text[:1 + 4048] + text[1 + 4000:])


@case
def daily_files_sharing_the_midnight_record(folder):
    raw, ends = table()
    day = p39.day_of(ends)
    for key in pd.unique(day):
        rows = np.flatnonzero(day == key)
        rows = np.arange(max(rows[0] - 1, 0), rows[-1] + 1)
        write(folder / f"d_{key}.csv", lines(raw.iloc[rows]))
    toml(folder, "d_*.csv")


@case
def two_year_files_in_other_column_orders(folder):
    def later(records, raw):
        return records[["stamp", "humid", "soil_c", "co2_grade", "fric_vel", "dryness", "air_c",
                        "sun_in", "co2_net"]]

    return p39.year_files(folder, later)


# --------------------------------------------------------------------------- fixed width
def fixed_width(folder, align, blanks=False, **inputs):
    """The example right- or left-`align`ed in columns 14 characters wide (no delimiter),
    -9999 written as blanks where `blanks`."""
    raw, _ = table()
    width = 14
    text = []
    for row in [list(raw.columns)] + raw.values.tolist():
        cells = ["" if blanks and c == "-9999" else c for c in row]
        text.append("".join(c.rjust(width) if align == "right" else c.ljust(width)
                            for c in cells).rstrip())
    write(folder / "t.txt", text)
    toml(folder, "t.txt", **inputs)


@case
def fixed_width_right_aligned_declared(folder):
    fixed_width(folder, "right", column_widths=[14] * 9)


@case
def fixed_width_left_aligned_blank_cells_declared(folder):
    fixed_width(folder, "left", blanks=True, column_widths=[14] * 9)


@case
def fixed_width_blank_cells_read_as_whitespace(folder):
    fixed_width(folder, "right", blanks=True, delimiter="whitespace")
    return "refused"      # split at blanks, a blank cell moves every value after it


# --------------------------------------------------------------------------- units in names
def names_with(folder, suffixes, form, **inputs):
    """The example with `suffixes` (column -> text) added to names, values `form`ed."""
    raw, _ = table()
    for column, write_value in form.items():
        raw[column] = p42.converted(raw[column], write_value)
    raw = raw.rename(columns={c: c + s for c, s in suffixes.items()})
    p41.saved(folder, raw, columns={k: v + suffixes.get(v, "") for k, v in MAP.items()},
              **inputs)


@case
def names_with_unit_suffixes_matching_the_values(folder):
    names_with(folder, {"air_c": "_degC", "dryness": "_kPa", "sun_in": "_Wm2"}, {})


@case
def name_says_hpa_values_hpa_config_silent(folder):
    names_with(folder, {"dryness": "_hPa"}, {"dryness": lambda v: f"{v * 10:.3f}"}, units={})
    frame = truth(None)          # hPa is the unit read where the config is silent
    written = pd.to_numeric(table()[0]["dryness"]).to_numpy()
    frame["vpd"] = np.where(written == -9999, np.nan,
                            [float(f"{v * 10:.3f}") for v in written])[:len(frame)]
    return frame


@case
def name_says_kpa_values_kpa_config_silent(folder):
    names_with(folder, {"dryness": "_kPa"}, {}, units={})
    return "refused"      # the config's default hPa against a name and values of kPa


@case
def name_says_kelvin_values_kelvin(folder):
    names_with(folder, {"air_c": "_K"}, {"air_c": lambda v: f"{v + 273.15:.2f}"})
    return "refused"


@case
def nee_name_with_unit_in_parentheses_slashes(folder):
    names_with(folder, {"co2_net": " (umol/m2/s)", "humid": " (%)"}, {})


# --------------------------------------------------------------------------- all missing
def emptied(folder, column, cell, **inputs):
    raw, _ = table()
    raw[column] = cell
    p41.saved(folder, raw, **inputs)


@case
def mapped_soil_temperature_all_missing(folder):
    emptied(folder, "soil_c", "-9999")
    return without("tsoil")


@case
def mapped_humidity_all_empty_cells(folder):
    emptied(folder, "humid", "")
    return without("rh")


@case
def mapped_air_temperature_all_nan_words(folder):
    emptied(folder, "air_c", "NaN")
    return "refused"      # no air temperature: no VPD check, no respiration driver of air


@case
def mapped_net_exchange_all_missing(folder):
    emptied(folder, "co2_net", "-9999")
    return "refused"      # nothing to gap-fill or partition


# --------------------------------------------------------------------------- intervals
def finer(folder, parts, spread, **inputs):
    """Each 30-minute record as `parts` records (end stamps 30/parts minutes apart),
    its values v - spread, ..., v + spread (mean v), codes kept."""
    raw, ends = table()
    step = pd.Timedelta(minutes=30 // parts)
    out = []
    for k in range(parts):
        part = raw.copy()
        part["stamp"] = (ends - (parts - 1 - k) * step).dt.strftime("%Y%m%d%H%M")
        offset = spread * (2 * k / (parts - 1) - 1)
        for column in ("co2_net", "air_c", "soil_c"):
            part[column] = p42.converted(part[column], lambda v, d=offset: f"{v + d:.3f}")
        part["order"] = np.arange(len(raw)) * parts + k
        out.append(part)
    frame = pd.concat(out).sort_values("order").drop(columns="order")
    p41.saved(folder, frame, **inputs)


@case
def ten_minute_records(folder):
    finer(folder, 3, 0.1)
    return "refused"      # a 30-minute covariance is no mean of three 10-minute ones


@case
def five_minute_weather_file_beside_half_hourly_flux(folder):
    raw, ends = table()
    write(folder / "flux.csv", lines(raw[["stamp", "co2_net", "fric_vel", "co2_grade"]]))
    step = pd.Timedelta("5min")
    met = raw[["stamp", "sun_in", "air_c", "dryness", "soil_c", "humid"]]
    out = []
    for k in range(6):
        part = met.copy()
        part["stamp"] = (ends - (5 - k) * step).dt.strftime("%Y%m%d%H%M")
        part["order"] = np.arange(len(raw)) * 6 + k
        out.append(part)
    write(folder / "met.csv", lines(pd.concat(out).sort_values("order").drop(columns="order")))
    toml(folder, ["flux.csv", "met.csv"])
    return "refused"      # two intervals: averaging the weather is the user's word


@case
def one_day_of_fifteen_minute_records(folder):
    def edit(text, raw):
        day = []
        for line in text[1 + 4000:1 + 4048]:
            stamp, rest = line.split(",", 1)
            early = (pd.Timestamp(stamp) - pd.Timedelta("15min")).strftime("%Y%m%d%H%M")
            day += [early + "," + rest, line]
        return text[:1 + 4000] + day + text[1 + 4048:]

    p40.edited(folder, edit)
    return "refused"


# --------------------------------------------------------------------------- containers
def tarred(folder, members, name="t.tar.gz", mode="w:gz"):
    """A tar archive (gzip-compressed for "w:gz") of `members` (name, bytes)."""
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode=mode, format=tarfile.USTAR_FORMAT) as archive:
        for member, data in members:
            info = tarfile.TarInfo(member)
            info.size, info.mtime = len(data), 0
            archive.addfile(info, io.BytesIO(data))
    (folder / name).write_bytes(buffer.getvalue())
    toml(folder, name)


@case
def tar_gz_of_one_csv(folder):
    tarred(folder, [("quillmoor_2021.csv", p40.plain_bytes())])


@case
def plain_tar_of_one_csv(folder):
    tarred(folder, [("quillmoor_2021.csv", p40.plain_bytes())], "t.tar", "w")


@case
def seven_zip_archive(folder):
    """A 7z archive's signature ("7z" BC AF 27 1C, 7-Zip's format description (m))."""
    (folder / "t.7z").write_bytes(b"7z\xbc\xaf\x27\x1c\x00\x04" + bytes(200))
    toml(folder, "t.7z")
    return "refused"


@case
def ods_spreadsheet(folder):
    """An OpenDocument spreadsheet: a zip whose first member "mimetype" names it
    (OASIS OpenDocument 1.2, part 3, section 3.3 (m))."""
    (folder / "t.ods").write_bytes(p40.zipped([
        ("mimetype", b"application/vnd.oasis.opendocument.spreadsheet"),
        ("content.xml", b"<office:document-content/>")]))
    toml(folder, "t.ods")
    return "refused"


@case
def xls_workbook_of_the_old_format(folder):
    (folder / "t.xls").write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(504))
    toml(folder, "t.xls")
    return "refused"


@case
def xlsx_workbook_saved_under_a_csv_name(folder):
    (folder / "t.csv").write_bytes(p42.workbook_bytes())
    toml(folder, "t.csv")
    return "refused"


@case
def tar_made_on_a_mac_with_resource_forks(folder):
    """macOS tar writes "._name" (AppleDouble, magic 00 05 16 07 (m)) beside each file."""
    tarred(folder, [("./._quillmoor_2021.csv", b"\x00\x05\x16\x07" + bytes(60)),
                    ("./quillmoor_2021.csv", p40.plain_bytes())])


@case
def tar_of_two_half_year_files(folder):
    raw, ends = table()
    half = (ends - pd.Timedelta("30min")).dt.month.to_numpy() <= 6
    tarred(folder, [("h1.csv", p40.plain_bytes(raw[half])),
                    ("h2.csv", p40.plain_bytes(raw[~half]))])
    # two tables named as one series, one header: read one after another since
    # layouts52 (refused before: list them in path once unpacked)


@case
def header_opened_by_a_percent_mark_with_units_line(folder):
    p40.edited(folder, lambda text, raw: ["%" + text[0], "%" + ",".join(UNITS)] + text[1:],
               rows_after_header=1)


@case
def compact_date_and_hhmm_columns(folder):
    p41.stamp_split(folder, lambda ends: {"ymd": stamps(ends, "%Y%m%d"),
                                          "hhmm": stamps(ends, "%H%M")}, "%Y%m%d %H%M")


@case
def iso_stamps_with_microseconds_and_offset(folder):
    p38.restamped(folder, lambda ends: [s + ".000000+01:00" for s in
                                        stamps(ends, "%Y-%m-%dT%H:%M:%S")], "ISO8601")


@case
def record_with_an_extra_value_mid_file(folder):
    def edit(text, raw):
        text[6001] += ",0.5"
        return text

    p40.edited(folder, edit)
    return "refused"      # which value is out of place? the user's word


@case
def lone_dash_for_no_value_undeclared(folder):
    p40.missing_words(folder, ["-"])
    return "refused"


@case
def lone_dash_for_no_value_declared(folder):
    p40.missing_words(folder, ["-"], missing=[-9999, "-"])


@case
def header_cells_holding_a_line_break_before_the_unit(folder):
    """A sheet whose header cells wrap the unit onto a second line, saved as CSV: the
    name and unit quoted, a line break inside (RFC 4180 allows it)."""
    raw, _ = table()
    cells = [f'"{n}\n[{u}]"' if u != "-" else n for n, u in zip(raw.columns, UNITS, strict=True)]
    text = lines(raw)
    text[0] = ",".join(cells)
    write(folder / "t.csv", text)
    toml(folder, "t.csv")       # mapped by the names alone, as "co2_net [unit]" is read


@case
def byte_order_mark_then_a_sep_line_semicolons(folder):
    raw, _ = table()
    write(folder / "t.csv", ["sep=;"] + lines(raw, sep=";"), ending="\r\n",
          encoding="utf-8-sig")
    toml(folder, "t.csv", delimiter=";")


@case
def seconds_with_a_decimal_comma_in_stamps(folder):
    """ISO 8601 allows a comma as the decimal sign of seconds: "01.06.2021 00:30:00,000"."""
    raw, ends = table()
    raw["stamp"] = [s + ",000" for s in stamps(ends, "%d.%m.%Y %H:%M:%S")]
    p41.saved(folder, raw, sep=";", time_format="%d.%m.%Y %H:%M:%S")


@case
def footer_line_of_equal_signs(folder):
    p40.edited(folder, lambda text, raw: text + ["=" * 40])


def month_files(folder, month_written):
    """Month files, month m written by ``month_written(m, records)`` (text lines, encoding,
    delimiter) or plainly."""
    raw, ends = table()
    month = p39.month_of(ends)
    for m in range(1, 13):
        text, encoding = month_written(m, raw[month == m]) or (lines(raw[month == m]), "utf-8")
        write(folder / f"q_{m:02d}.csv", text, encoding=encoding)
    toml(folder, "q_*.csv")


@case
def one_month_file_in_another_delimiter(folder):
    month_files(folder, lambda m, part: (lines(part, sep="\t"), "utf-8") if m == 7 else None)
    return "refused"      # one delimiter setting: the July file's fields are no commas


@case
def one_month_file_with_decimal_commas_and_semicolons(folder):
    def written(m, part):
        if m != 7:
            return None
        part = part.apply(lambda c: c.str.replace(".", ",", regex=False))
        return lines(part, sep=";"), "utf-8"

    month_files(folder, written)
    return "refused"


@case
def month_files_each_with_a_header_opened_by_a_comment_mark(folder):
    def written(m, part):
        text = lines(part)
        return (["# " + text[0]] + text[1:]) if m > 1 else text, "utf-8"

    month_files(folder, written)


@case
def one_month_file_in_utf16_among_utf8(folder):
    month_files(folder, lambda m, part: (lines(part), "utf-16") if m == 7 else None)


def judge(name, folder, base_tables, cli):
    """The case's state as ``probe_layouts39.judge`` finds it (a DataFrame returned is the
    truth, a folder the canonical reading)."""
    p39.CASES[name] = CASES[name]
    return p39.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 58)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
