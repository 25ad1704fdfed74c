"""Probe: logger files of families probes 38-55 did not write (round layouts56).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts56.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). Helpers and judging as ``probe_layouts53.py``; no case of probes 38-55 is
repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a tower's logger, its user or its software might: half hours averaged by
the user from a 10-minute logger (stamps at :10/:40), a logger clock a minute behind, the
interval changed mid-year (hourly, then half-hourly, and back); a year split over two loggers
overlapping by two weeks; a leap year without its 29 February, with it written twice, a 29
February in a common year, day 366; counts of seconds since a logger's epoch (declared, or
stated only above the header), of GPS seconds, of minutes since 2000, spreadsheet-rewritten
stamps (".0" and scientific notation), a script's midnight dated with the day it opens; a
daylight-saving clock without its zone; note lines opened by "!" and "%", a remark of 200 kB,
a lone CR inside a record, bytes that are no UTF-8 in a remark, a "[EOF]" footer, a signature
field after the last named one; three-digit exponents, exponents without a point, "D"
exponents with decimal commas, en dashes for minus signs; NEE as turbulent flux plus storage;
records shuffled; DOS code page 437 in names. Its truth is the example's frame, that frame
with the records the files lack missing, the reading of a folder holding the same records in
one clean file, or ``"refused"`` where the file cannot tell the intent (one ``error:`` line
naming the cause). A case whose truth is a frame may also be refused with a clear cause
(``refused``, not ``WRONG``). One line a case: ``right``, ``refused``, ``WRONG`` or ``CRASH``;
the last line counts each class.
"""
import os
import sys
import traceback
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts56-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts53 as p53  # noqa: E402
from probe_layouts38 import lines as text_lines  # noqa: E402
from probe_layouts38 import table, toml, write  # noqa: E402
from probe_layouts39 import civil  # noqa: E402
from probe_layouts50 import canonical, month_of  # noqa: E402

CASES = {}
COMPACT = "%Y%m%d%H%M"


def case(function):
    CASES[function.__name__] = function
    return function


def lines(raw, sep=","):
    return text_lines(raw, sep=sep)


def one_file(folder, raw, name="t.csv", ending="\n", encoding="utf-8", sep=",", **inputs):
    write(folder / name, lines(raw, sep), ending=ending, encoding=encoding)
    toml(folder, name, **({"delimiter": sep} if sep != "," else {}) | inputs)


def written(column, form):
    """`column`'s numbers written by `form` (a function of a float), -9999 kept."""
    return [v if v == "-9999" else form(float(v)) for v in column]


def counted(ends, unit, since):
    """Whole counts of `unit` since `since`."""
    return [str(v) for v in (ends - pd.Timestamp(since)) // pd.Timedelta(unit)]


def leap_year():
    """The example's records restamped as 2020 from 1 January 00:30 on, 30 minutes apart
    (ends 30 December 24:00: the leap day takes a day)."""
    raw, ends = table()
    ends = pd.Series(pd.Timestamp("2020-01-01 00:30") + pd.to_timedelta(
        np.arange(len(raw)) * 30, unit="min"))
    raw["stamp"] = list(ends.dt.strftime(COMPACT))
    return raw, ends


def leap_day(ends):
    return ((ends - pd.Timedelta("30min")).dt.strftime("%m%d") == "0229").to_numpy()


# --------------------------------------------------------------------------- interval
@case
def ten_minute_logger_averaged_to_half_hours_stamped_at_10_and_40(folder):
    """The user averaged a 10-minute logger's records in threes from its first record,
    so the half hours end at :10 and :40: true half hours off the clock grid by a third
    of the interval (truth: the example's records 10 minutes later, read at their own
    times and warned of, as the reader's rule for a clock off the grid is; or refused)."""
    raw, ends = table()
    raw["stamp"] = list((ends + pd.Timedelta("10min")).dt.strftime(COMPACT))
    one_file(folder, raw)
    return pd.Timedelta("10min")


@case
def logger_clock_one_minute_behind_all_year(folder):
    """Stamps at :29 and :59 all year (a clock never set): a minute off, beyond the 10 s
    rounded as jitter; read at the minute written (warned) it misplaces no record by more
    than a minute (truth: the example a minute early; or refused naming the stamps)."""
    raw, ends = table()
    raw["stamp"] = list((ends - pd.Timedelta("1min")).dt.strftime(COMPACT))
    one_file(folder, raw)
    return pd.Timedelta("-1min")


def hourly_within(ends, first, last):
    """Records within [first, last) whose end is not on the hour (an hourly logger
    writes only those on the hour)."""
    inside = ((ends > first) & (ends <= last)).to_numpy()
    return inside & (ends.dt.minute != 0).to_numpy()


@case
def hourly_february_and_march_then_half_hourly(folder):
    """A logger program changed from 60 to 30 minutes on 1 April (hourly since 1 February);
    the hourly records are written here as the half-hour ending on the hour (truth: the :30
    records of February and March missing), or refused naming the interval change."""
    raw, ends = table()
    lacks = hourly_within(ends, "2021-02-01 00:00", "2021-04-01 00:00")
    one_file(folder, raw[~lacks])
    return lacks


@case
def half_hourly_then_hourly_in_june_then_half_hourly(folder):
    raw, ends = table()
    lacks = hourly_within(ends, "2021-06-01 00:00", "2021-07-01 00:00")
    one_file(folder, raw[~lacks])
    return lacks


# --------------------------------------------------------------------------- two loggers
def two_loggers(folder, edit_second):
    raw, ends = table()
    a = raw[(ends <= "2021-07-15 00:00").to_numpy()]
    b = raw[(ends > "2021-07-01 00:00").to_numpy()].copy()
    b = edit_second(b, (ends[b.index] <= "2021-07-15 00:00").to_numpy())
    write(folder / "logger_a.csv", lines(a))
    write(folder / "logger_b.csv", lines(b))
    toml(folder, "logger_*.csv")


@case
def two_loggers_overlapping_two_weeks_values_differ_slightly(folder):
    """The second logger's NEE in the two weeks both wrote differs by 0.002-0.02 from the
    first's (another analyser): which to keep is the user's choice (refused naming both)."""
    def edit(b, overlap):
        nee = b["co2_net"].to_numpy(copy=True)
        rng = np.random.default_rng(56)
        for i in np.flatnonzero(overlap & (nee != "-9999")):
            nee[i] = f"{float(nee[i]) + rng.choice([-1, 1]) * rng.uniform(0.002, 0.02):.3f}"
        b["co2_net"] = nee
        return b
    two_loggers(folder, edit)
    return "refused"


@case
def two_loggers_overlapping_two_weeks_same_values_other_column_order(folder):
    def edit(b, overlap):
        return b[["stamp", "humid", "soil_c", "fric_vel", "dryness", "air_c", "sun_in",
                  "co2_net", "co2_grade"]]
    two_loggers(folder, edit)


# --------------------------------------------------------------------------- leap years
@case
def leap_year_without_its_29_february(folder):
    """A 2020 file whose logger skipped the leap day (a calendar without it): a day's gap."""
    raw, ends = leap_year()
    one_file(folder, raw[~leap_day(ends)])
    return canonical(folder, raw[~leap_day(ends)])


@case
def leap_year_with_its_29_february_written_twice(folder):
    """The leap day's 48 records written again after it, the same values."""
    raw, ends = leap_year()
    day = np.flatnonzero(leap_day(ends))
    text = lines(raw)
    text[day[-1] + 2:day[-1] + 2] = text[day[0] + 1:day[-1] + 2]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")
    return canonical(folder, raw)


@case
def common_year_with_a_29_february(folder):
    """A 2021 logger whose calendar holds a leap day: 1 March's records stamped 29
    February, every later day a day early: refused naming the impossible date."""
    raw, ends = table()
    moved = (ends > "2021-03-01 00:00").to_numpy()
    stamp = pd.Series(ends)
    stamp[moved] = stamp[moved] - pd.Timedelta("1D")
    text = [s.strftime(COMPACT) for s in stamp]
    day1 = np.flatnonzero(((ends > "2021-03-01 00:00") & (ends <= "2021-03-02 00:00")).to_numpy())
    for i in day1[:-1]:
        text[i] = "202102" + "29" + ends[i].strftime("%H%M")
    raw["stamp"] = text
    one_file(folder, raw)
    return "refused"


@case
def leap_year_day_of_year_columns_up_to_366(folder):
    """Year, day of year and integer hhmm of the end stamps in 2020 (the last record
    ends on day 366 at 0)."""
    raw, ends = leap_year()
    framed = raw.drop(columns="stamp")
    framed.insert(0, "hhmm", list((ends.dt.hour * 100 + ends.dt.minute).astype(str)))
    framed.insert(0, "doy", list(ends.dt.day_of_year.astype(str)))
    framed.insert(0, "year", list(ends.dt.year.astype(str)))
    write(folder / "t.csv", lines(framed))
    toml(folder, "t.csv", time_column=["year", "doy", "hhmm"], time_format="%Y %j %H%M")
    return canonical(folder, raw)


# --------------------------------------------------------------------------- epochs
def count_stamps(folder, unit, since, time_format, title=None):
    raw, ends = table()
    raw["stamp"] = counted(ends, unit, since)
    text = lines(raw)
    if title:
        text.insert(0, title)
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format=time_format,
         **({"rows_before_header": 1} if title else {}))


@case
def seconds_since_a_logger_epoch_1990_declared(folder):
    count_stamps(folder, "1s", "1990-01-01", "seconds since 1990-01-01 00:00:00")


@case
def seconds_since_1990_stated_above_the_header_config_says_1970(folder):
    """A title line states "Time: seconds since 1990-01-01 00:00:00"; the config reads the
    counts as Unix time: 20 years early, 2001: refused naming the title's epoch."""
    count_stamps(folder, "1s", "1990-01-01", "seconds since 1970-01-01",
                 title="Logger time: seconds since 1990-01-01 00:00:00")
    return "refused"


@case
def gps_seconds_declared(folder):
    count_stamps(folder, "1s", "1980-01-06", "seconds since 1980-01-06")


@case
def minutes_since_2000_declared(folder):
    count_stamps(folder, "1min", "2000-01-01", "minutes since 2000-01-01 00:00")


@case
def day_numbers_of_a_numerics_program_read_as_days_since_1970(folder):
    """Day numbers counted from year 0 (738157.02083 = 1 January 2021 00:30) declared as
    days since 1970: 2021 years late, refused naming the reference."""
    raw, ends = table()
    days = (ends - pd.Timestamp("2021-01-01")) / pd.Timedelta("1D") + 738157
    raw["stamp"] = [f"{d:.5f}" for d in days]
    one_file(folder, raw, time_format="days since 1970-01-01")
    return "refused"


# --------------------------------------------------------------------------- stamps rewritten
@case
def compact_stamps_written_as_floats(folder):
    """A script wrote the integer stamps through a float column: "202101010030.0"."""
    raw, _ = table()
    raw["stamp"] = [s + ".0" for s in raw["stamp"]]
    one_file(folder, raw)


@case
def compact_stamps_in_scientific_notation(folder):
    """A sheet shortened the twelve-digit stamps: "2.02101E+11" holds no minute: refused
    naming the stamps."""
    raw, _ = table()
    raw["stamp"] = [f"{int(s):.5E}" for s in raw["stamp"]]
    one_file(folder, raw)
    return "refused"


@case
def compact_stamps_with_seconds_under_a_minute_format(folder):
    """Fourteen-digit stamps (seconds "00") under "%Y%m%d%H%M"."""
    raw, _ = table()
    raw["stamp"] = [s + "00" for s in raw["stamp"]]
    one_file(folder, raw)


@case
def closing_midnight_dated_with_the_day_it_opens(folder):
    """A script dated each day's last record (24:00) "YYYY-MM-DD 00:00" of the day it
    closes, not the next: the stamp of the day's first instant, out of order: refused."""
    raw, ends = table()
    stamp = ends.copy()
    midnight = (ends.dt.hour == 0) & (ends.dt.minute == 0)
    stamp[midnight] = stamp[midnight] - pd.Timedelta("1D")
    raw["stamp"] = list(stamp.dt.strftime("%Y-%m-%d %H:%M"))
    one_file(folder, raw, time_format="%Y-%m-%d %H:%M")
    return "refused"


@case
def local_summer_clock_without_its_zone(folder):
    """Stamps in civil time (summer time from 28 March) with no time_zone set: the spring
    hour absent, the autumn hour twice with other values: refused naming them."""
    raw, ends = table()
    raw["stamp"] = list(civil(ends).dt.strftime(COMPACT))
    one_file(folder, raw)
    return "refused"


@case
def local_summer_clock_the_repeated_hour_written_once(folder):
    """Civil time with its zone set; a database keyed by the stamp kept the repeated autumn
    hour's first pass only (truth: the second pass's two records missing). (A file holding
    the second pass alone cannot be told from this one: the reader's rule, first = summer
    time, places it an hour early.)"""
    raw, ends = table()
    local = civil(ends)
    raw["stamp"] = list(local.dt.strftime(COMPACT))
    second_pass = local.duplicated(keep="first").to_numpy()
    one_file(folder, raw[~second_pass], time_zone="Europe/Berlin")
    return second_pass


@case
def logger_clock_reset_to_2000_for_two_days(folder):
    """After a power cut the logger stamped two June days from 2000-01-01 00:30 until the
    clock was set: records dated 2000 (refused naming them, or left out)."""
    raw, ends = table()
    lost = ((ends > "2021-06-10 00:00") & (ends <= "2021-06-12 00:00")).to_numpy()
    reset = pd.Timestamp("2000-01-01 00:30") + pd.to_timedelta(np.arange(lost.sum()) * 30,
                                                                 unit="min")
    stamp = list(raw["stamp"])
    for i, s in zip(np.flatnonzero(lost), reset, strict=True):
        stamp[i] = s.strftime(COMPACT)
    raw["stamp"] = stamp
    one_file(folder, raw)
    return lost


# --------------------------------------------------------------------------- lines
def with_notes(folder, mark, note):
    raw, _ = table()
    text = lines(raw)
    for at in (15000, 9000, 4000, 100):
        text.insert(at, f"{mark} {note}")
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def exclamation_note_lines_between_records(folder):
    with_notes(folder, "!", "sensor cleaned, lens wiped")


@case
def percent_note_lines_between_records(folder):
    with_notes(folder, "%", "power cut 2h, values after restart")


@case
def a_remark_of_200_kilobytes(folder):
    """One record's remark holds a pasted status dump of 200 kB (beyond the csv module's
    default field limit of 131 072 characters)."""
    raw, _ = table()
    remark = [""] * len(raw)
    remark[5000] = "status " + "x" * 200_000
    raw["remark"] = remark
    one_file(folder, raw)


@case
def a_lone_cr_inside_one_record(folder):
    """A stray carriage return (a serial line's noise) between two fields of one record:
    the record cut in two (refused naming the line), or read whole."""
    raw, _ = table()
    text = lines(raw)
    cells = text[7001].split(",")
    text[7001] = ",".join(cells[:4]) + "\r," + ",".join(cells[4:])
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def bytes_that_are_no_utf8_in_a_remark(folder):
    """A field-notes column typed on another machine: "Mähen" in Latin-1 on three records
    of a UTF-8 file (the mapped columns are ASCII)."""
    raw, _ = table()
    remark = [""] * len(raw)
    for at in (3000, 9000, 12000):
        remark[at] = "MAHEN"
    raw["notes"] = remark
    data = ("\n".join(lines(raw)) + "\n").encode("utf-8").replace(b"MAHEN", "Mähen".encode(
        "latin-1"))
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")


@case
def eof_in_brackets_closing_the_file(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw) + ["[EOF]"])
    toml(folder, "t.csv")


@case
def signature_field_after_the_last_named_field(folder):
    """Every record ends with a logger's signature word ("F3A9") the header does not name."""
    raw, _ = table()
    rng = np.random.default_rng(0)
    text = lines(raw)
    text[1:] = [f"{line},{int(s):04X}" for line, s in
                zip(text[1:], rng.integers(0, 65536, len(raw)), strict=True)]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- numbers
NUMERIC = ["co2_net", "sun_in", "air_c", "dryness", "fric_vel", "soil_c", "humid"]


def numbers_rewritten(folder, form, sep=",", **inputs):
    raw, _ = table()
    for column in NUMERIC:
        raw[column] = written(raw[column], form)
    one_file(folder, raw, sep=sep, **inputs)


def three_digit_exponent(v):
    mantissa, exponent = f"{v:.6E}".split("E")
    return f"{mantissa}E{exponent[0]}{int(exponent[1:]):03d}"


@case
def three_digit_exponents(folder):
    """An old runtime's "3.290000E-001"."""
    numbers_rewritten(folder, three_digit_exponent)


@case
def exponents_without_a_point(folder):
    """Integers times a power of ten: "329E-3", "-103E-3"."""
    def form(v):
        return f"{round(v * 10000):d}E-4"
    numbers_rewritten(folder, form)


@case
def d_exponents_with_decimal_commas_semicolons(folder):
    def form(v):
        return f"{v:.6E}".replace("E", "D").replace(".", ",")
    numbers_rewritten(folder, form, sep=";", decimal=",")


@case
def en_dashes_for_minus_signs(folder):
    """A word processor turned the minus signs into en dashes ("–0.103"), the code too:
    read as minus signs (as U+2212 is), or refused naming the cell."""
    raw, _ = table()
    for column in NUMERIC:
        raw[column] = [v.replace("-", "\u2013") for v in raw[column]]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- columns
def turbulent_and_storage(raw):
    """NEE written as a turbulent flux and a storage flux that add up to it exactly
    (thousandths), storage missing where NEE is."""
    rng = np.random.default_rng(7)
    nee = raw["co2_net"].to_numpy()
    store = rng.integers(-400, 401, len(nee))
    turb, stor = [], []
    for v, s in zip(nee, store, strict=True):
        if v == "-9999":
            turb.append("-9999")
            stor.append("-9999")
        else:
            milli = round(float(v) * 1000)
            turb.append(f"{(milli - s) / 1000:.3f}")
            stor.append(f"{s / 1000:.3f}")
    raw = raw.drop(columns="co2_net")
    raw.insert(1, "co2_turb", turb)
    raw.insert(2, "co2_store", stor)
    return raw


def summed(raw, split):
    """`raw` with its NEE the sum of `split`'s two columns as floats add them (the last
    digit of a double may differ from the decimal written: 0.32899999999999996)."""
    truth = raw.copy()
    truth["co2_net"] = [
        "-9999" if "-9999" in (t, s) else repr(float(t) + float(s))
        for t, s in zip(split["co2_turb"], split["co2_store"], strict=True)]
    return truth


@case
def nee_as_turbulent_flux_and_storage_both_mapped(folder):
    """Truth: the file whose NEE is the two columns' sum, read."""
    raw, _ = table()
    split = turbulent_and_storage(raw)
    columns = dict(p38.MAP, nee="co2_turb", storage="co2_store")
    one_file(folder, split, columns=columns)
    return canonical(folder, summed(raw, split))


@case
def nee_as_turbulent_flux_and_storage_storage_missing_a_week(folder):
    """The storage profile was down a week in May: NEE there is missing (the sum of a
    number and no number; a turbulent flux alone is no NEE the site declared)."""
    raw, ends = table()
    split = turbulent_and_storage(raw)
    down = ((ends > "2021-05-10 00:00") & (ends <= "2021-05-17 00:00")).to_numpy()
    split.loc[down, "co2_store"] = "-9999"
    columns = dict(p38.MAP, nee="co2_turb", storage="co2_store")
    one_file(folder, split, columns=columns)
    return canonical(folder, summed(raw, split))


@case
def records_shuffled(folder):
    """Rows in no order (a database export without ORDER BY)."""
    raw, _ = table()
    order = np.random.default_rng(3).permutation(len(raw))
    one_file(folder, raw.iloc[order])


@case
def a_month_never_written(folder):
    raw, ends = table()
    lacks = (month_of(ends) == 8)
    one_file(folder, raw[~lacks])
    return lacks


@case
def dos_code_page_437_degree_in_unmapped_names(folder):
    """Names "Tair(°C)" of unmapped columns in code page 437 (the degree sign 0xF8), the
    encoding not set: the mapped names read, the others named or read as bytes."""
    raw, _ = table()
    raw["t_panel(°C)"] = "21.5"
    raw["t_box(°C)"] = "20.1"
    data = ("\n".join(lines(raw)) + "\n").encode("cp437")
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv")


@case
def dos_code_page_437_degree_declared(folder):
    raw, _ = table()
    raw["t_panel(°C)"] = "21.5"
    data = ("\n".join(lines(raw)) + "\n").encode("cp437")
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv", encoding="cp437")


@case
def mapped_names_with_a_degree_in_code_page_437(folder):
    """The air temperature is named "air(°C)" in code page 437, mapped as "air(°C)"; the
    encoding not set: refused naming the encoding, or read."""
    raw, _ = table()
    raw = raw.rename(columns={"air_c": "air(°C)"})
    data = ("\n".join(lines(raw)) + "\n").encode("cp437")
    (folder / "t.csv").write_bytes(data)
    toml(folder, "t.csv", columns=dict(p38.MAP, tair="air(°C)"))


@case
def utc_counts_beside_local_compact_stamps_both_named(folder):
    """Unix seconds (UTC) in a column beside the local stamps; the config maps the local
    column: read (the second column is not a clock the config reads)."""
    raw, ends = table()
    raw.insert(1, "unix_utc", counted(ends - pd.Timedelta("1h"), "1s", "1970-01-01"))
    one_file(folder, raw)


@case
def unix_counts_mapped_beside_local_stamps(folder):
    """The same file with the config mapping the Unix seconds (UTC): read converted to the
    site's standard time, the same records."""
    raw, ends = table()
    raw.insert(1, "unix_utc", counted(ends - pd.Timedelta("1h"), "1s", "1970-01-01"))
    one_file(folder, raw.drop(columns="stamp"), time_column="unix_utc",
             time_format="seconds since 1970-01-01 00:00:00 UTC")


@case
def fractional_day_of_year_one_column_year_in_the_title(folder):
    """A day-of-year column "64.60417" and the year only above the header: refused naming
    the year (a format without a year is refused)."""
    raw, ends = table()
    raw["stamp"] = [f"{d:.5f}" for d in
                    (ends - pd.Timestamp("2021-01-01")) / pd.Timedelta("1D") + 1]
    text = lines(raw)
    text.insert(0, "Year: 2021")
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format="%j", rows_before_header=1)
    return "refused"


@case
def file_in_utf16_little_endian_cr_only_semicolons(folder):
    raw, _ = table()
    write(folder / "t.csv", lines(raw, ";"), ending="\r", encoding="utf-16")
    toml(folder, "t.csv", delimiter=";")


@case
def rows_of_two_files_interleaved_by_a_merge(folder):
    """Two half-year files concatenated and then sorted by a text sort of day-first
    stamps ("01.02.2021 00:30" before "02.01.2021"): the order is no clock order but
    every stamp is right: read sorted."""
    raw, ends = table()
    raw["stamp"] = list(ends.dt.strftime("%d.%m.%Y %H:%M"))
    raw = raw.sort_values("stamp", kind="stable")
    one_file(folder, raw, time_format="%d.%m.%Y %H:%M")


def judge(name, folder, base_tables, cli):
    """As ``probe_layouts53.judge``; a case may return a ``pandas.Timedelta``: the
    example's frame with every stamp that much later (records read at their own times)."""
    try:
        expected = CASES[name](folder)
    except Exception:        # noqa: BLE001 - the probe's own fault, shown
        return "PROBE", traceback.format_exc(limit=1).strip().splitlines()[-1]
    if not isinstance(expected, pd.Timedelta):
        p53.CASES = {name: lambda _folder: expected}
        return p53.judge(name, folder, base_tables, cli)

    def want():
        frame = p38.truth(None).copy()
        frame.index = frame.index + expected
        return frame

    def said(report):
        told = [*report.warnings, *report.notes]
        return f"{len(told)} note(s): " + "; ".join(w.splitlines()[0][-90:] for w in told)

    state = p38.reading_state(folder, want, said, False)
    if not cli or state[0] == "CRASH":
        return state
    return p38.commands_agree(state, folder, {})


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
