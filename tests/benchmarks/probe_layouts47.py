"""Probe: what a user means without a preprocessing script, read with a note (round layouts47).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts47.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). The helpers (our own column names, the site TOML, the judging of a reading
and of ``check`` and ``run``) are those of ``probe_layouts38.py`` to ``probe_layouts45.py``;
none of their cases is repeated.

Each case rewrites the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as a spreadsheet or a logger might: rows sorted by a column (descending,
unstable), one file of month blocks each newest first, whole days in reverse order, daily
sums or means after each day under a date or a label, a month file closed by its sums,
seconds of the day beside a date, a group line with a units row in brackets. Each has an
ambiguous twin that must stay refused: a clock reset beside a record counter (monotone in
file order), summary values that are not the day's, a stamp repeated in a sorted file,
rows sorted by a column the file does not hold, days in reverse with one day missing, a
group line above a header lacking a mapped name, a units row not in brackets, a count
of the day joined to the date in one field. Its truth is the example's frame, or
``"refused"`` (one ``error:`` line is due). One line a case: ``right``, ``refused``,
``WRONG`` or ``CRASH``; the last line counts each class.
"""
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts47-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts40 as p40  # noqa: E402
import probe_layouts43 as p43  # noqa: E402
import probe_layouts45 as p45  # noqa: E402
from probe_layouts38 import lines, stamps, table, toml, write  # noqa: E402

CASES = {}


def case(function):
    CASES[function.__name__] = function
    return function


def sorted_by(folder, column, descending=False, kind="stable", change=None):
    """The example's rows sorted by `column` (numbers), `change(raw)` applied first."""
    raw, _ = table()
    if change is not None:
        raw = change(raw)
    key = pd.to_numeric(raw[column]).to_numpy() * (-1 if descending else 1)
    write(folder / "t.csv", lines(raw.iloc[np.argsort(key, kind=kind)]))
    toml(folder, "t.csv")


# --------------------------------------------------------------------------- row order
@case
def rows_sorted_by_flag_descending_unstable(folder):
    """A query's ORDER BY co2_grade DESC (no time order within a flag)."""
    sorted_by(folder, "co2_grade", descending=True, kind="quicksort")


@case
def rows_sorted_by_air_temperature_descending(folder):
    sorted_by(folder, "air_c", descending=True)


@case
def rows_sorted_by_flag_one_stamp_repeated(folder):
    """Twin: the sorted file holds one stamp twice with other values (a second record)."""
    def repeat(raw):
        extra = raw.iloc[[500]].copy()
        extra["co2_net"] = "1.234"
        return pd.concat([raw, extra], ignore_index=True)
    sorted_by(folder, "co2_grade", change=repeat)
    return "refused"


@case
def rows_sorted_by_a_flag_the_file_does_not_hold(folder):
    """Twin: sorted by the flag, the flag column then deleted: nothing explains the order."""
    raw, _ = table()
    raw = raw.iloc[np.argsort(pd.to_numeric(raw["co2_grade"]).to_numpy(), kind="stable")]
    write(folder / "t.csv", lines(raw.drop(columns="co2_grade")))
    toml(folder, "t.csv", columns={k: v for k, v in p38.MAP.items() if k != "nee_flag"})
    return "refused"


@case
def clock_reset_beside_a_record_counter(folder):
    """Twin: a record number column (monotone in file order) and, from record 3000, a
    week stamped from 2020-12-01 (a clock reset): no sort may place those records."""
    raw, ends = table()
    raw.insert(1, "record", [str(i) for i in range(len(raw))])
    wrong = ends.copy()
    wrong.iloc[3000:3336] = pd.date_range("2020-12-01 00:30", periods=336, freq="30min")
    raw["stamp"] = stamps(wrong, "%Y%m%d%H%M")
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv")
    return "refused"


@case
def one_file_of_month_blocks_each_newest_first(folder):
    """A year's file of monthly exports appended in turn, each sorted newest first."""
    raw, ends = table()
    text = lines(raw)[:1]
    for _, part in p38.months(raw, ends):
        text += lines(part, header=False)[::-1]
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


def days_in_reverse(folder, left_out=""):
    """The example's days pasted newest day first, each in time order, day `left_out`
    (ISO date) not written."""
    raw, ends = table()
    day = (ends - pd.Timedelta("30min")).dt.date.to_numpy()
    text = lines(raw)[:1]
    for d in sorted(set(day), reverse=True):
        if str(d) != left_out:
            text += lines(raw[day == d], header=False)
    write(folder / "t.csv", text)
    toml(folder, "t.csv")


@case
def whole_days_in_reverse_order_each_oldest_first(folder):
    """Daily files pasted newest day first, each day's records in time order."""
    days_in_reverse(folder)


@case
def whole_days_in_reverse_order_one_day_missing(folder):
    """Twin: as above with 1 March left out: the blocks do not meet (a gap)."""
    days_in_reverse(folder, "2021-03-01")
    return "refused"


# --------------------------------------------------------------------------- summary lines
def with_day_lines(folder, label, statistic, stamp_format="%Y-%m-%d %H:%M", shift=0,
                   decimals=3, sep=",", **inputs):
    """The example, stamps as `stamp_format`, after each day's records a line
    ``label(day)`` and the `statistic` ("mean" or "sum") of the records `shift` days on."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, stamp_format)
    values = p45.numbers(raw).replace(-9999, np.nan)
    day = (ends - pd.Timedelta("30min")).dt.date.to_numpy()
    groups = list(raw.groupby(day, sort=True).groups.items())
    text = [sep.join(raw.columns)]
    for k, (d, rows) in enumerate(groups):
        text += lines(raw.loc[rows], sep=sep, header=False)
        summed = getattr(values.loc[groups[(k + shift) % len(groups)][1]], statistic)()
        text.append(label(d) + sep + sep.join(f"{v:.{decimals}f}" for v in summed))
    write(folder / "t.csv", text)
    toml(folder, "t.csv", time_format=stamp_format, delimiter=sep, **inputs)


@case
def daily_sums_after_every_day_under_the_date(folder):
    """ "2021-01-01,<sums of the day's records>" after its 48 records (a daily table)."""
    with_day_lines(folder, lambda d: f"{d:%Y-%m-%d}", "sum", decimals=2)


@case
def daily_means_under_a_day_first_date_semicolons(folder):
    """ "01.02.2021;<means>" after each day of "01.02.2021 00:30" records."""
    with_day_lines(folder, lambda d: f"{d:%d.%m.%Y}", "mean", "%d.%m.%Y %H:%M", sep=";")


@case
def daily_total_label_with_sums(folder):
    """ "Total,<sums>" after each day (a spreadsheet's subtotal)."""
    with_day_lines(folder, lambda d: "Total", "sum", "%Y%m%d%H%M", decimals=2)


@case
def daily_means_of_the_previous_day_under_the_date(folder):
    """Twin: each line's values those of the day before, not of the records above."""
    with_day_lines(folder, lambda d: f"{d:%Y-%m-%d}", "mean", "%Y%m%d%H%M", shift=-1)
    return "refused"


@case
def daily_means_rounded_to_one_decimal_under_the_date(folder):
    """Twin? No: means to one decimal are still the day's to the decimals written."""
    with_day_lines(folder, lambda d: f"{d:%Y-%m-%d}", "mean", "%Y%m%d%H%M", decimals=1)


@case
def month_files_each_closed_by_its_sums(folder):
    """Month files closed by "2021-01,<sums of the month's records>"."""
    raw, ends = table()
    raw["stamp"] = stamps(ends, "%Y-%m-%d %H:%M")
    values = p45.numbers(raw).replace(-9999, np.nan)
    month = (ends - pd.Timedelta("30min")).dt.month.to_numpy()
    for m in range(1, 13):
        sums = values[month == m].sum()
        write(folder / f"q_{m:02d}.csv", lines(raw[month == m]) + [f"2021-{m:02d}," + ",".join(
            f"{v:.2f}" for v in sums)])
    toml(folder, "q_*.csv", time_format="%Y-%m-%d %H:%M")


# --------------------------------------------------------------------------- header lines
UNITS = ["[-]", "[umol/m2/s]", "[W/m2]", "[degC]", "[kPa]", "[m/s]", "[degC]", "[%]", "[-]"]


@case
def group_line_and_bracket_units_row_undeclared(folder):
    p40.edited(folder, lambda text, raw: [p45.group_line(), text[0], ",".join(UNITS)] + text[1:])


@case
def group_line_semicolons_undeclared(folder):
    p40.edited(folder, lambda text, raw: [p45.group_line(";")] + text, sep=";", delimiter=";")


@case
def group_line_above_a_header_lacking_a_mapped_name(folder):
    """Twin: the header under the group line lacks "humid" (renamed "rh_x")."""
    p40.edited(folder, lambda text, raw: [p45.group_line(), text[0].replace("humid", "rh_x")]
               + text[1:])
    return "refused"


@case
def units_row_without_brackets_undeclared(folder):
    """Twin: "-,umol/m2/s,W/m2,..." under the names (no brackets): the config's word."""
    p40.edited(folder, lambda text, raw: text[:1] + [",".join(u.strip("[]") for u in UNITS)]
               + text[1:])
    return "refused"


# --------------------------------------------------------------------------- day counts
@case
def date_and_seconds_of_the_day(folder):
    """A "YYYY-MM-DD" column and one of seconds since midnight (the record's start)."""
    raw, ends = table()
    starts = ends - pd.Timedelta("30min")
    raw.insert(0, "second", [str(v) for v in starts.dt.hour * 3600 + starts.dt.minute * 60])
    raw.insert(0, "day", stamps(starts, "%Y-%m-%d"))
    write(folder / "t.csv", lines(raw.drop(columns="stamp")))
    toml(folder, "t.csv", time_column=["day", "second"], time_format="%Y-%m-%d %H:%M:%S",
         time_marks="start")


@case
def date_and_minutes_of_the_day_in_one_field(folder):
    """Twin: "2021-01-01 90" in one field: left named, the date and count not columns."""
    raw, ends = table()
    starts = ends - pd.Timedelta("30min")
    raw["stamp"] = [f"{s:%Y-%m-%d} {s.hour * 60 + s.minute}" for s in starts]
    write(folder / "t.csv", lines(raw))
    toml(folder, "t.csv", time_format="%Y-%m-%d %H:%M", time_marks="start")
    return "refused"


def main():
    # judged as probe_layouts43.py judges its cases (probe_layouts39.judge)
    p43.CASES.update(CASES)
    p38.probe(CASES, p43.judge, "cases", 52)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
