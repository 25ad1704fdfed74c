"""Probe: logger files as a tower or a data centre writes them, not yet in probes 38-52
(round layouts53).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts53.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts52.py``;
none of their cases is repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a logger, an export or a person might: ISO 8601 stamps whose offset or
"Z" the format leaves out, offsets of another zone than the site's, a comma before the
seconds' fraction, a literal "UTC" or "GMT" after the clock; year, day of year and hhmm in
one field (padded, unpadded, 2400 closing the day); spreadsheet day numbers whose midnights
are written as whole numbers; NetCDF's fill value 9.96921e+36 and "--" for no value; note
lines mid-file holding dates and commas; a single note line ending the file; a logger
restart that wrote the header and the last record again (same or other values); a program
change that wrote its title, header, units and statistics lines again with columns
reordered, inserted or dropped; fixed-width files with blanks inside the stamp; UTF-16 with
lone CR; Mac Roman names; a zip of eleven month files; tar archives compressed by xz and
bzip2; a zip compressed by bzip2 or LZMA; xz month files with one missing. Its truth is the
example's frame, the example's frame with the records the files lack missing, the reading
of a folder holding the same records in one clean file, or ``"refused"`` where the file
cannot tell the intent (one ``error:`` line naming the cause: file, line or column). A case
whose truth is a frame may also be refused with a clear cause (``refused``, not ``WRONG``).
One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``; the last line counts each
class.
"""
import bz2
import gzip
import io
import lzma
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
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts53-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
from probe_layouts38 import UNITS, lines, stamps, table, toml, write  # noqa: E402
from probe_layouts50 import canonical, month_files, month_of  # noqa: E402

from fluxpart.io import read_site_config  # noqa: E402

CASES = {}
STATISTICS = ",".join(["TS", "Avg", "Avg", "Avg", "Avg", "Avg", "Avg", "Avg", "Smp"])


def case(function):
    CASES[function.__name__] = function
    return function


def with_lines(folder, edit, ending="\n", name="t.csv", encoding="utf-8", opener=None,
               **inputs):
    """The example's lines as `edit(text)` changes them."""
    raw, _ = table()
    write(folder / name, edit(lines(raw)), ending=ending, encoding=encoding, opener=opener)
    toml(folder, name, **inputs)


def utc(ends):
    """The end stamps in UTC (the site keeps UTC+1 all year)."""
    return ends - pd.Timedelta("1h")


def july(ends):
    return int(np.flatnonzero(month_of(ends) == 7)[0])


def archived(members, mode):
    """A tar archive of `members` (name, bytes) in `mode` ("w", "w:xz", "w:bz2")."""
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode=mode) as archive:
        for name, data in members:
            info = tarfile.TarInfo(name)
            info.size, info.mtime = len(data), 0
            archive.addfile(info, io.BytesIO(data))
    return buffer.getvalue()


def zipped(members, method=zipfile.ZIP_DEFLATED):
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", method) as archive:
        for name, data in members:
            archive.writestr(zipfile.ZipInfo(name, date_time=(2021, 12, 31, 0, 0, 0)), data,
                             compress_type=method)
    return buffer.getvalue()


def month_members(raw, ends, skip=()):
    return [(f"q_{m:02d}.csv", ("\n".join(lines(part)) + "\n").encode())
            for m, part in p38.months(raw, ends) if m not in skip]


# --------------------------------------------------------------------------- ISO stamps
@case
def iso_offset_stamps_under_a_format_without_the_offset(folder):
    """"2021-01-01T00:30:00+01:00" read under "%Y-%m-%dT%H:%M:%S": refused naming the
    stamp (the offset is no part of the format), never read without it."""
    p38.restamped(folder, "%Y-%m-%dT%H:%M:%S+01:00", "%Y-%m-%dT%H:%M:%S")
    return "refused"


@case
def iso_z_stamps_under_a_format_without_the_z(folder):
    """"2021-01-01T00:30:00Z" (UTC) under "%Y-%m-%dT%H:%M:%S": refused naming the stamp."""
    p38.restamped(folder, lambda ends: stamps(utc(ends), "%Y-%m-%dT%H:%M:%SZ"),
                  "%Y-%m-%dT%H:%M:%S")
    return "refused"


@case
def iso_z_stamps_under_iso8601(folder):
    """UTC stamps with "Z" and seconds under time_format = "ISO8601"."""
    p38.restamped(folder, lambda ends: stamps(utc(ends), "%Y-%m-%dT%H:%M:%SZ"), "ISO8601")


@case
def iso_offset_of_another_zone_than_the_sites(folder):
    """The same instants written at -05:00 (a data centre's zone): converted to the site's
    standard time."""
    p38.restamped(folder, lambda ends: stamps(ends - pd.Timedelta("6h"),
                                              "%Y-%m-%dT%H:%M:%S-05:00"), "%Y-%m-%dT%H:%M:%S%z")


@case
def iso_offset_plus_zero_written_out(folder):
    """UTC stamps written "+00:00" rather than "Z"."""
    p38.restamped(folder, lambda ends: stamps(utc(ends), "%Y-%m-%dT%H:%M:%S+00:00"),
                  "%Y-%m-%dT%H:%M:%S%z")


@case
def iso_seconds_fraction_after_a_comma_with_offset(folder):
    """"2021-01-01T00:30:00,000+01:00" quoted (ISO 8601 allows a comma before the
    fraction) under "ISO8601": read right or refused naming the stamp."""
    p38.restamped(folder, lambda ends: ['"' + s + '"' for s in stamps(
        ends, "%Y-%m-%dT%H:%M:%S,000+01:00")], "ISO8601")


@case
def literal_utc_after_the_clock(folder):
    """"2021-01-01 00:30:00 UTC" under "%Y-%m-%d %H:%M:%S UTC" (the word in the format as
    a literal): the stamps are UTC, an hour behind the site's standard time; read as UTC
    or refused, never read an hour off."""
    p38.restamped(folder, lambda ends: stamps(utc(ends), "%Y-%m-%d %H:%M:%S UTC"),
                  "%Y-%m-%d %H:%M:%S UTC")


@case
def literal_gmt_after_the_clock(folder):
    p38.restamped(folder, lambda ends: stamps(utc(ends), "%d/%m/%Y %H:%M GMT"),
                  "%d/%m/%Y %H:%M GMT")


@case
def literal_utc_before_the_date(folder):
    """"UTC 2021-01-01 00:30" (a label opening the stamp)."""
    p38.restamped(folder, lambda ends: stamps(utc(ends), "UTC %Y-%m-%d %H:%M"),
                  "UTC %Y-%m-%d %H:%M")


@case
def utc_stamp_column_named_utc_read_as_local(folder):
    """A column "time_utc" of UTC stamps read with no offset or zone in the settings: the
    records would sit an hour early. Read right (the name ignored is the user's to judge:
    refused or read as written is what a name can tell), so the truth is a refusal or the
    reading of the stamps as written; this case records which."""
    raw, ends = table()
    raw = raw.rename(columns={"stamp": "time_utc"})
    raw["time_utc"] = stamps(utc(ends), "%Y-%m-%d %H:%M")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_column="time_utc", time_format="%Y-%m-%d %H:%M")
    clean = raw.rename(columns={"time_utc": "stamp"})
    return canonical(folder, clean, time_format="%Y-%m-%d %H:%M")


# --------------------------------------------------------------------------- day of year
@case
def year_doy_hhmm_in_one_field(folder):
    """"2021 001 0030" in one comma-separated cell."""
    p38.restamped(folder, "%Y %j %H%M")


@case
def year_doy_hhmm_in_one_field_unpadded(folder):
    """"2021 1 30" (day and hhmm without leading zeros): read right or refused."""
    p38.restamped(folder, lambda ends: [f"{s.year} {s.day_of_year} {s.hour * 100 + s.minute}"
                                        for s in ends], "%Y %j %H%M")


@case
def year_doy_2400_in_one_field_closing_each_day(folder):
    """"2021 001 2400" for the record ending at the next midnight."""
    def written(ends):
        start = ends - pd.Timedelta("30min")
        return [f"{a.year} {a.day_of_year:03d} " + ("2400" if (s.hour, s.minute) == (0, 0)
                                                   else f"{s.hour:02d}{s.minute:02d}")
                for a, s in zip(start, ends, strict=True)]

    p38.restamped(folder, written, "%Y %j %H%M")


@case
def doy_and_hhmm_columns_with_year_column_last(folder):
    """Day of year, hhmm and the year as the file's last column."""
    raw, ends = table()
    raw.insert(0, "hhmm", stamps(ends, "%H%M"))
    raw.insert(0, "doy", stamps(ends, "%j"))
    raw["year"] = stamps(ends, "%Y")
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["year", "doy", "hhmm"], time_format="%Y %j %H%M")


# --------------------------------------------------------------------------- day numbers
@case
def spreadsheet_day_numbers_midnights_as_whole_numbers(folder):
    """Day numbers of the 1900 system, each midnight written "44198" (a sheet's General
    format drops ".000000")."""
    def written(ends):
        return [str(int(v)) if v == int(v) else f"{v:.6f}".rstrip("0")
                for v in (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")]

    p38.restamped(folder, written, "days since 1899-12-30")


@case
def spreadsheet_day_numbers_with_fifteen_digits(folder):
    """Day numbers written with 15 significant digits (44197.0208333333)."""
    p38.restamped(folder, lambda ends: [f"{v:.15g}" for v in (
        ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")], "days since 1899-12-30")


@case
def spreadsheet_day_numbers_quoted_in_a_semicolon_file(folder):
    """Quoted day numbers with a decimal comma ("44197,020833") in a semicolon file."""
    raw, ends = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    raw["stamp"] = ['"' + s.replace(".", ",") + '"' for s in p38.serial_days(ends)]
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",", time_format="days since 1899-12-30")


# --------------------------------------------------------------------------- no value
def filled(folder, code, **inputs):
    """The example's -9999 cells written `code`."""
    raw, _ = table()
    raw.iloc[:, 1:8] = raw.iloc[:, 1:8].replace("-9999", code)
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", **inputs)


@case
def netcdf_fill_value_for_no_value_undeclared(folder):
    """9.96921e+36 (NetCDF's default float fill) where a value is missing, undeclared:
    read as missing (absurd, warned) or refused naming it."""
    filled(folder, "9.96921e+36")


@case
def netcdf_fill_value_for_no_value_declared(folder):
    filled(folder, "9.96921e+36", missing=[-9999, 9.96921e36])


@case
def netcdf_fill_value_full_precision_declared_short(folder):
    """"9.969209968386869e+36" in the file, declared as 9.96921e36."""
    filled(folder, "9.969209968386869e+36", missing=[-9999, 9.96921e36])


@case
def double_dash_for_no_value_undeclared(folder):
    """"--" (a masked value as a print of an array writes it), undeclared."""
    filled(folder, "--")


@case
def double_dash_for_no_value_declared(folder):
    filled(folder, "--", missing=[-9999, "--"])


@case
def minus_9999_with_six_decimals_quoted(folder):
    """Every field quoted and the no-value cells "-9999.000000"."""
    raw, _ = table()
    raw.iloc[:, 1:8] = raw.iloc[:, 1:8].replace("-9999", "-9999.000000")
    write(folder / "t.csv", ['"' + '","'.join(row) + '"'
                             for row in [list(raw.columns)] + raw.values.tolist()])
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- note lines
@case
def note_lines_mid_file_holding_dates_and_commas(folder):
    """"# 2021-03-04 12:00, span check, 400.0 ppm" among the records."""
    def edit(text):
        for at in (9000, 6000, 3000):
            text[at:at] = ["# 2021-03-04 12:00, span check, 400.0 ppm, 0.2 %"]
        return text

    with_lines(folder, edit)


@case
def one_note_line_ending_the_file(folder):
    """A single "# end of file" line after the last record."""
    with_lines(folder, lambda t: t + ["# end of file"])


@case
def note_lines_with_two_marks_mid_file(folder):
    """Notes opened by "#" and by "//" among the records, undeclared: read past (warned)
    or refused naming a line."""
    def edit(text):
        text[9000:9000] = ["// sensor cleaned"]
        text[3000:3000] = ["# power cut"]
        return text

    with_lines(folder, edit)


# --------------------------------------------------------------------------- restarts
@case
def restart_header_then_the_last_record_again_same_values(folder):
    """A restart wrote the header again and then the record before it again, equal."""
    with_lines(folder, lambda t: t[:9000] + [t[0], t[8999]] + t[9000:])


@case
def restart_header_then_the_last_record_again_other_values(folder):
    """The same with other values in the repeated record: refused naming the stamp."""
    def edit(text):
        fields = text[8999].split(",")
        fields[1] = f"{float(fields[1]) + 1.5:.3f}"
        return text[:9000] + [text[0], ",".join(fields)] + text[9000:]

    with_lines(folder, edit)
    return "refused"


def program_change(folder, later, title_after="Program,co2_half_hour_v4,Signature,51233"):
    """A four-line block (title, names, units, statistics), written again in July over the
    later records in `later` (column names), as a new logger program writes it."""
    raw, ends = table()
    units = dict(zip(raw.columns, UNITS, strict=True))
    stats = dict(zip(raw.columns, STATISTICS.split(","), strict=True))
    at = july(ends)

    def block(part, title):
        names = list(part.columns)
        return ([title, ",".join(names), ",".join(units.get(n, "-") for n in names),
                 ",".join(stats.get(n, "Avg") for n in names)] + lines(part, header=False))

    first = block(raw.iloc[:at], "Program,co2_half_hour_v3,Signature,40871")
    after = raw.iloc[at:]
    for name in later:
        if name not in after.columns:
            after = after.assign(**{name: "0"})
    second = block(after[later], title_after)
    write(folder / "t.csv", first + second, ending="\r\n")
    toml(folder, "t.csv", rows_before_header=1, rows_after_header=2)
    return raw, ends, at


@case
def program_change_block_again_columns_reordered(folder):
    """Read by the second header, or refused naming its line."""
    program_change(folder, ["stamp", "co2_net", "sun_in", "soil_c", "dryness", "fric_vel",
                            "air_c", "humid", "co2_grade"])


@case
def program_change_block_again_column_inserted(folder):
    """A battery column inserted after the stamp from July."""
    program_change(folder, ["stamp", "batt_volt", "co2_net", "sun_in", "air_c", "dryness",
                            "fric_vel", "soil_c", "humid", "co2_grade"])


@case
def program_change_block_again_humidity_dropped(folder):
    """The mapped humidity column gone from July: read with humidity missing from July
    (warned) or refused naming the column."""
    raw, ends, at = program_change(folder, ["stamp", "co2_net", "sun_in", "air_c", "dryness",
                                            "fric_vel", "soil_c", "co2_grade"])
    clean = raw.copy()
    clean.iloc[at:, clean.columns.get_loc("humid")] = "-9999"
    return canonical(folder, clean)


@case
def program_change_header_again_without_its_block(folder):
    """Only the names line written again in July (no title, units, statistics), columns
    reordered, in a file of a four-line block."""
    raw, ends = table()
    at = july(ends)
    order = ["stamp", "co2_net", "sun_in", "soil_c", "dryness", "fric_vel", "air_c", "humid",
             "co2_grade"]
    text = (["Program,co2_half_hour_v3,Signature,40871", ",".join(raw.columns),
             ",".join(UNITS), STATISTICS] + lines(raw.iloc[:at], header=False)
            + lines(raw.iloc[at:][order]))
    write(folder / "t.csv", text)
    toml(folder, "t.csv", rows_before_header=1, rows_after_header=2)


# --------------------------------------------------------------------------- fixed width
def fixed(folder, stamp_cells, width_of_stamp, time_format, **inputs):
    raw, ends = table()
    raw["stamp"] = stamp_cells(ends)
    widths = [width_of_stamp] + [12] * 8
    text = ["".join(f"{c:>{w}}" for c, w in zip(row, widths, strict=True))
            for row in [list(raw.columns)] + raw.values.tolist()]
    write(folder / "t.txt", text)
    toml(folder, "t.txt", column_widths=widths, time_format=time_format, **inputs)


@case
def fixed_width_year_doy_hhmm_stamp_with_blanks(folder):
    """"2021 001 0030" in a 14-character field of a fixed-width file."""
    fixed(folder, lambda ends: stamps(ends, "%Y %j %H%M"), 14, "%Y %j %H%M")


@case
def fixed_width_date_and_clock_stamp_with_a_blank(folder):
    fixed(folder, lambda ends: stamps(ends, "%Y-%m-%d %H:%M"), 18, "%Y-%m-%d %H:%M")


@case
def fixed_width_declared_widths_one_short(folder):
    """The widths list one character short for the stamp: refused naming a cell or the
    widths, never values cut."""
    raw, ends = table()
    widths = [14] + [12] * 8
    text = ["".join(f"{c:>{w}}" for c, w in zip(row, widths, strict=True))
            for row in [list(raw.columns)] + raw.values.tolist()]
    write(folder / "t.txt", text)
    toml(folder, "t.txt", column_widths=[13] + [12] * 8)
    return "refused"


# --------------------------------------------------------------------------- encodings, ends
@case
def utf16_with_bom_lone_cr_line_ends(folder):
    raw, _ = table()
    (folder / "t.txt").write_bytes(("\r".join(lines(raw, sep="\t")) + "\r").encode("utf-16"))
    toml(folder, "t.txt", delimiter="\t")


@case
def utf8_bom_lone_cr_semicolons(folder):
    raw, _ = table()
    (folder / "t.csv").write_bytes(("\r".join(lines(raw, sep=";")) + "\r").encode("utf-8-sig"))
    toml(folder, "t.csv", delimiter=";")


def mac_roman_names(folder, **inputs):
    raw, _ = table()
    names = ["stamp", "co2_net", "sun_in", "air_°C", "dryness", "fric_vel", "soil_°C", "humid",
             "co2_grade"]
    raw.columns = names
    write(folder / "t.csv", lines(raw), encoding="mac_roman")
    toml(folder, "t.csv", columns={"nee": "co2_net", "rg": "sun_in", "tair": "air_°C",
                                   "vpd": "dryness", "ustar": "fric_vel", "tsoil": "soil_°C",
                                   "rh": "humid", "nee_flag": "co2_grade"}, **inputs)


@case
def mac_roman_degree_in_names_declared(folder):
    mac_roman_names(folder, encoding="mac_roman")


@case
def mac_roman_degree_in_names_undeclared(folder):
    """Read right or refused naming the encoding or the columns, never the columns
    swapped."""
    mac_roman_names(folder)


# --------------------------------------------------------------------------- archives
@case
def zip_of_eleven_month_files_one_missing(folder):
    raw, ends = table()
    (folder / "t.zip").write_bytes(zipped(month_members(raw, ends, skip=(5,))))
    toml(folder, "t.zip")
    return month_of(ends) == 5


@case
def xz_compressed_tar_of_month_files(folder):
    raw, ends = table()
    (folder / "t.tar.xz").write_bytes(archived(month_members(raw, ends), "w:xz"))
    toml(folder, "t.tar.xz")


@case
def bzip2_compressed_tar_of_one_file(folder):
    raw, _ = table()
    (folder / "t.tbz2").write_bytes(archived([("t.csv", p40.plain_bytes(raw))], "w:bz2"))
    toml(folder, "t.tbz2")


@case
def zip_compressed_by_bzip2(folder):
    (folder / "t.zip").write_bytes(zipped([("t.csv", p40.plain_bytes())], zipfile.ZIP_BZIP2))
    toml(folder, "t.zip")


@case
def zip_compressed_by_lzma(folder):
    (folder / "t.zip").write_bytes(zipped([("t.csv", p40.plain_bytes())], zipfile.ZIP_LZMA))
    toml(folder, "t.zip")


@case
def zip_stored_without_compression(folder):
    (folder / "t.zip").write_bytes(zipped([("t.csv", p40.plain_bytes())], zipfile.ZIP_STORED))
    toml(folder, "t.zip")


@case
def xz_month_files_one_missing_crlf(folder):
    def edit(month, text):
        return lzma.compress(("\r\n".join(text) + "\r\n").encode())

    raw, ends = month_files(folder, edit, pattern="q_{:02d}.csv.xz")
    (folder / "q_08.csv.xz").unlink()
    return month_of(ends) == 8


@case
def bzip2_month_files_each_with_a_four_line_block(folder):
    def edit(month, text):
        block = ["Program,co2_half_hour_v3,Signature,40871", text[0], ",".join(UNITS),
                 STATISTICS] + text[1:]
        return bz2.compress(("\n".join(block) + "\n").encode())

    month_files(folder, edit, pattern="q_{:02d}.dat.bz2", rows_before_header=1,
                rows_after_header=2)


@case
def gzip_month_files_one_missing_one_empty(folder):
    """Eleven gzipped month files and an empty one for the month the logger was down."""
    def edit(month, text):
        data = ("\n".join(text) + "\n").encode() if month != 3 else b""
        return gzip.compress(data, mtime=0)

    raw, ends = month_files(folder, edit, pattern="q_{:02d}.csv.gz")
    return month_of(ends) == 3


@case
def zip_with_a_password(folder):
    """A zip whose member is encrypted (its flag bit set): refused naming the archive."""
    data = bytearray(zipped([("t.csv", p40.plain_bytes())], zipfile.ZIP_STORED))
    for signature, offset in ((b"PK\x03\x04", 6), (b"PK\x01\x02", 8)):
        at = data.find(signature)
        data[at + offset] |= 1
    (folder / "t.zip").write_bytes(bytes(data))
    toml(folder, "t.zip")
    return "refused"


@case
def int16_minimum_for_no_value_undeclared(folder):
    """-32768 (a 16-bit logger's lowest integer) where a value is missing, undeclared:
    refused or read as missing, never a value."""
    filled(folder, "-32768")


@case
def int32_maximum_for_no_value_undeclared(folder):
    filled(folder, "2147483647")


@case
def uint16_maximum_for_no_value_undeclared(folder):
    filled(folder, "65535")


@case
def minus_99_99_for_no_value_undeclared(folder):
    """-99.99 where a value is missing, undeclared: plausible for an NEE, not for the
    weather; refused or read as missing, never -99.99 an NEE."""
    filled(folder, "-99.99")


@case
def minus_999_9_for_no_value_undeclared(folder):
    filled(folder, "-999.9")


@case
def minus_7999_for_no_value_undeclared(folder):
    filled(folder, "-7999")


@case
def zeros_for_no_value_undeclared(folder):
    """0 written in every column of a missing value (a logger's empty register): refused
    or read as missing, never zeros as values."""
    filled(folder, "0")


@case
def zeros_for_no_value_in_nee_only(folder):
    """0 written for each missing NEE (the weather written -9999)."""
    raw, _ = table()
    raw.loc[raw["co2_net"] == "-9999", "co2_net"] = "0"
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


@case
def rg_integers_grouped_by_commas_semicolon_file(folder):
    """Rg written as whole numbers, those of 1000 W m-2 and more "1,034" (a thousands
    comma), in a semicolon file of decimal points: read as 1034 or refused, never
    1.034."""
    raw, _ = table()
    rg = pd.to_numeric(raw["sun_in"]).round()
    plain = raw.copy()
    plain["sun_in"] = [f"{v:.0f}" for v in rg]
    written = raw.copy()
    written["sun_in"] = [f"{v:,.0f}" if v != -9999 else "-9999" for v in rg]
    write(folder / "t.csv", lines(written, sep=";"))
    toml(folder, "t.csv", delimiter=";")
    return canonical(folder, plain)


@case
def vpd_pascals_integers_grouped_by_points_semicolon_decimal_commas(folder):
    """VPD in Pa as whole numbers ("2.263" for 2263 Pa) in a semicolon file of decimal
    commas: read as 2263 or refused, never 2.263."""
    raw, _ = table()
    vpd = pd.to_numeric(raw["dryness"])
    pa = np.where(vpd == -9999, -9999.0, (vpd * 1000).round())
    plain = raw.copy()
    plain["dryness"] = [f"{v:.0f}" for v in pa]
    written = raw.copy()
    written.iloc[:, 1:] = written.iloc[:, 1:].apply(
        lambda c: c.str.replace(".", ",", regex=False))
    written["dryness"] = [f"{v:,.0f}".replace(",", ".") if v != -9999 else "-9999"
                          for v in pa]
    write(folder / "t.csv", lines(written, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",", units={"vpd": "Pa"})
    return canonical(folder, plain, units={"vpd": "Pa"})


@case
def restart_repeats_the_last_record_with_missing_cells(folder):
    """After the header written again, the record before it repeated with -9999 in the
    weather cells (sensors warming up): the rows complete each other."""
    def edit(text):
        fields = text[8999].split(",")
        fields[2:8] = ["-9999"] * 6
        return text[:9000] + [text[0], ",".join(fields)] + text[9000:]

    with_lines(folder, edit)


@case
def a_day_sent_again_at_the_end_with_other_values(folder):
    """The records of 10 March written again after the last record, NEE recomputed:
    refused naming the stamps."""
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.strftime("%m-%d") == "03-10"
    again = raw[day.to_numpy()].copy()
    nee = pd.to_numeric(again["co2_net"])
    again["co2_net"] = [f"{v + 0.25:.3f}" if v != -9999 else "-9999" for v in nee]
    write(folder / "t.csv", lines(raw) + lines(again, header=False))
    toml(folder, "t.csv")
    return "refused"


@case
def month_files_one_missing_the_next_one_starts_with_a_title(folder):
    """Month files, May missing and June's opening with a title line the others lack."""
    def edit(month, text):
        return (["Quillmoor T1 (fictional), June"] if month == 6 else []) + text

    raw, ends = month_files(folder, edit)
    (folder / "q_05.csv").unlink()
    return month_of(ends) == 5


@case
def offset_after_a_blank_without_colon(folder):
    """"2021-01-01 00:30:00 +0100" (a blank before the offset, as the date command of
    Unix writes it) under "%Y-%m-%d %H:%M:%S %z"."""
    p38.restamped(folder, "%Y-%m-%d %H:%M:%S +0100", "%Y-%m-%d %H:%M:%S %z")


@case
def iso_comma_fraction_in_a_semicolon_file_of_decimal_commas(folder):
    """"2021-01-01T00:30:00,000+01:00;0,329;..." (a European export, consistent in its
    commas) under "ISO8601"."""
    raw, ends = table()
    raw.iloc[:, 1:] = raw.iloc[:, 1:].apply(lambda c: c.str.replace(".", ",", regex=False))
    raw["stamp"] = stamps(ends, "%Y-%m-%dT%H:%M:%S,000+01:00")
    write(folder / "t.csv", lines(raw, sep=";"))
    toml(folder, "t.csv", delimiter=";", decimal=",", time_format="ISO8601")


@case
def last_record_as_day_366_of_a_common_year(folder):
    """"2021 366 0000" for the record ending at 2022-01-01 00:00 (the day counted on
    from 31 December, the year not yet turned): read as that instant."""
    p38.restamped(folder, lambda ends: [
        "2021 366 0000" if s == pd.Timestamp("2022-01-01") else s.strftime("%Y %j %H%M")
        for s in ends], "%Y %j %H%M")


@case
def midnight_written_as_2400_and_again_as_0000_same_values(folder):
    """Each day closed by "24:00" and the next day opened by "00:00" with the same values
    (two programs' habits joined): the same instant twice, equal: read once."""
    raw, ends = table()
    start = ends - pd.Timedelta("30min")
    midnight = ((ends.dt.hour == 0) & (ends.dt.minute == 0)).to_numpy()
    raw.insert(0, "date", np.where(midnight, stamps(start, "%Y-%m-%d"), stamps(ends, "%Y-%m-%d")))
    raw.insert(1, "clock", np.where(midnight, "24:00", stamps(ends, "%H:%M")))
    text = lines(raw.drop(columns="stamp"))
    out = [text[0]]
    for i, line in enumerate(text[1:]):
        out.append(line)
        if midnight[i] and i + 1 < len(raw):
            fields = line.split(",")
            out.append(",".join([ends.iloc[i].strftime("%Y-%m-%d"), "00:00", *fields[2:]]))
    write(folder / "t.csv", out)
    toml(folder, "t.csv", time_column=["date", "clock"], time_format="%Y-%m-%d %H:%M")


@case
def four_line_block_quoted_crlf_trailing_comma_gzipped(folder):
    """Title, names, units and statistics lines, every field quoted, each line closed by
    a comma, CRLF, gzipped."""
    raw, _ = table()
    rows = ([["Program", "co2_half_hour_v3", "Signature", "40871"], list(raw.columns), UNITS,
             STATISTICS.split(",")] + raw.values.tolist())
    data = "".join('"' + '","'.join(row) + '",\r\n' for row in rows).encode()
    (folder / "t.dat.gz").write_bytes(gzip.compress(data, mtime=0))
    toml(folder, "t.dat.gz", rows_before_header=1, rows_after_header=2)


@case
def zip_compressed_by_deflate64(folder):
    """A zip whose member is marked Deflate64 (method 9, Windows Explorer's for large
    files): refused naming the method, which the standard library cannot expand."""
    data = bytearray(zipped([("t.csv", p40.plain_bytes())], zipfile.ZIP_STORED))
    for signature, offset in ((b"PK\x03\x04", 8), (b"PK\x01\x02", 10)):
        data[data.find(signature) + offset] = 9
    (folder / "t.zip").write_bytes(bytes(data))
    toml(folder, "t.zip")
    return "refused"


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts52.judge``; a case may return a boolean array of the example's
    records the files lack (read as missing)."""
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    refusal_due = isinstance(expected, str)

    def want():
        if isinstance(expected, Path):
            return read_site_config(expected / "site.toml").read()[0]
        return p38.truth(expected if isinstance(expected, np.ndarray) else None)

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
