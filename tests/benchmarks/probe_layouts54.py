"""Probe: a logger program change in the middle of one file (round layouts54).

Run by hand from the repository root: ``.venv/bin/python tests/benchmarks/probe_layouts54.py``
(``--dir DIR`` for the scratch folder; names of cases to run only those; ``--no-cli`` to read
in process only). Helpers and judging as ``probe_layouts53.py``; none of its cases is
repeated.

Each case writes the invented Quillmoor grassland year (``examples/quillmoor_grassland.csv``,
a FICTIONAL site) as one logger file across a program change: the header block written
again with columns reordered, inserted or dropped, twice in a year, after a restart of the
new program, with a record cut short before it, with the last day re-sent after it (same or
other values), in one of twelve month files, in a whitespace-delimited or quoted file; and
blocks that cannot be trusted: a mapped column's unit changed, a title of another kind, a
part of a few records, a mapped column renamed, the stamp column renamed. Its truth is the
example's frame, the reading of a folder holding the same records in one clean file, or
``"refused"`` (one ``error:`` line naming the cause). One line a case: ``right``,
``refused``, ``WRONG`` or ``CRASH``; the last line counts each class.
"""
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
if "--dir" not in sys.argv:
    sys.argv += ["--dir", str(Path(__import__("tempfile").mkdtemp(prefix="fluxpart-layouts54-")))]
import probe_layouts38 as p38  # noqa: E402
import probe_layouts53 as p53  # noqa: E402
from probe_layouts38 import UNITS, lines, table, toml, write  # noqa: E402
from probe_layouts50 import canonical, month_of  # noqa: E402

CASES = {}
STATS = dict(zip(["stamp", "co2_net", "sun_in", "air_c", "dryness", "fric_vel", "soil_c",
                  "humid", "co2_grade"], p53.STATISTICS.split(","), strict=True))
REORDERED = ["stamp", "co2_net", "sun_in", "soil_c", "dryness", "fric_vel", "air_c", "humid",
             "co2_grade"]
INSERTED = ["stamp", "batt_volt", "co2_net", "sun_in", "air_c", "dryness", "fric_vel",
            "soil_c", "humid", "co2_grade"]


def case(function):
    CASES[function.__name__] = function
    return function


def block(part, title="Program,co2_half_hour_v3,Signature,40871", units=None, sep=",",
          with_units=True):
    """A four-line block (title, names, units, statistics) over `part`'s records."""
    raw, _ = table()
    own = dict(zip(raw.columns, UNITS, strict=True)) | (units or {})
    names = list(part.columns)
    head = ([title] if title else []) + [sep.join(names)]
    if with_units:
        head += [sep.join(own.get(n, "-") for n in names),
                 sep.join(STATS.get(n, "Avg") for n in names)]
    return head + lines(part, sep=sep, header=False)


def reordered(part, order):
    for name in order:
        if name not in part.columns:
            part = part.assign(**{name: "0"})
    return part[order]


def at_month(ends, month):
    return int(np.flatnonzero(month_of(ends) == month)[0])


def one_file(folder, text, **inputs):
    write(folder / "t.csv", text, ending="\r\n")
    toml(folder, "t.csv", rows_before_header=1, rows_after_header=2, **inputs)


@case
def two_program_changes_in_a_year(folder):
    """Columns reordered in April, a battery column inserted in September."""
    raw, ends = table()
    a, b = at_month(ends, 4), at_month(ends, 9)
    one_file(folder, block(raw.iloc[:a])
             + block(reordered(raw.iloc[a:b], REORDERED), "Program,co2_half_hour_v4,Signature,1")
             + block(reordered(raw.iloc[b:], INSERTED), "Program,co2_half_hour_v5,Signature,2"))


@case
def program_change_then_a_restart_of_the_new_program(folder):
    """The new program's block written again (a power cut) in October."""
    raw, ends = table()
    a, b = at_month(ends, 7), at_month(ends, 10)
    later = "Program,co2_half_hour_v4,Signature,51233"
    one_file(folder, block(raw.iloc[:a]) + block(reordered(raw.iloc[a:b], REORDERED), later)
             + block(reordered(raw.iloc[b:], REORDERED), later))


@case
def program_change_after_a_restart_of_the_old_program(folder):
    """The old program's block written again in March, the new one's in July."""
    raw, ends = table()
    a, b = at_month(ends, 3), at_month(ends, 7)
    one_file(folder, block(raw.iloc[:a]) + block(raw.iloc[a:b])
             + block(reordered(raw.iloc[b:], REORDERED), "Program,co2_half_hour_v4,Signature,5"))


@case
def program_change_after_a_record_cut_short(folder):
    """The last record before the new block cut mid-write: that record missing."""
    raw, ends = table()
    a = at_month(ends, 7)
    first = block(raw.iloc[:a])
    first[-1] = first[-1][:20]
    one_file(folder, first + block(reordered(raw.iloc[a:], REORDERED),
                                   "Program,co2_half_hour_v4,Signature,5"))
    return np.arange(len(raw)) == a - 1


@case
def program_change_then_the_last_day_sent_again_same_values(folder):
    """The new program re-sent the last day of the old one, equal values."""
    raw, ends = table()
    a = at_month(ends, 7)
    one_file(folder, block(raw.iloc[:a]) + block(reordered(raw.iloc[a - 48:], REORDERED),
                                                  "Program,co2_half_hour_v4,Signature,5"))


@case
def program_change_then_the_last_day_sent_again_other_values(folder):
    raw, ends = table()
    a = at_month(ends, 7)
    again = raw.iloc[a - 48:].copy()
    again.iloc[:48, 1] = [f"{float(v) + 0.5:.3f}" if v != "-9999" else "1.000"
                          for v in again.iloc[:48, 1]]
    one_file(folder, block(raw.iloc[:a]) + block(reordered(again, REORDERED),
                                                  "Program,co2_half_hour_v4,Signature,5"))
    return "refused"


@case
def program_change_in_one_of_twelve_month_files(folder):
    """June's file holds the change (columns reordered from 15 June)."""
    raw, ends = table()
    month = month_of(ends)

    def edit(m, text):
        if m != 6:
            return text
        part = raw[month == 6]
        cut = len(part) // 2
        return (lines(part.iloc[:cut]) + lines(reordered(part.iloc[cut:], REORDERED)))

    for m in range(1, 13):
        write(folder / f"q_{m:02d}.csv", edit(m, lines(raw[month == m])))
    toml(folder, "q_*.csv")


@case
def program_change_whitespace_delimited(folder):
    raw, ends = table()
    a = at_month(ends, 7)
    text = lines(raw.iloc[:a], sep=" ") + lines(reordered(raw.iloc[a:], REORDERED), sep=" ")
    write(folder / "t.txt", text)
    toml(folder, "t.txt", delimiter="whitespace")


@case
def program_change_every_cell_quoted(folder):
    raw, ends = table()
    a = at_month(ends, 7)

    def quoted(text):
        return [",".join(f'"{c}"' for c in line.split(",")) for line in text]

    one_file(folder, quoted(block(raw.iloc[:a], '"TOA9","Quillmoor","X1"'))
             + quoted(block(reordered(raw.iloc[a:], REORDERED), '"TOA9","Quillmoor","X2"')))


@case
def program_change_mapped_unit_changed(folder):
    """The new program writes air_c labelled degF, its values in °F: refused."""
    raw, ends = table()
    a = at_month(ends, 7)
    later = reordered(raw.iloc[a:], REORDERED).copy()
    later["air_c"] = [f"{float(v) * 1.8 + 32:.2f}" if v != "-9999" else v
                      for v in later["air_c"]]
    one_file(folder, block(raw.iloc[:a]) + block(later, "Program,co2_half_hour_v4,Sig,5",
                                                 units={"air_c": "degF"}))
    return "refused"


@case
def program_change_title_of_another_kind(folder):
    """A block whose title is not the file's kind (another logger's file appended)."""
    raw, ends = table()
    a = at_month(ends, 7)
    one_file(folder, block(raw.iloc[:a]) + block(reordered(raw.iloc[a:], REORDERED),
                                                  "Station Quillmoor export 2021"))
    return "refused"


@case
def program_change_a_few_records_before_the_end(folder):
    """The new block 10 records before the file ends: too short to judge."""
    raw, ends = table()
    a = len(raw) - 10
    one_file(folder, block(raw.iloc[:a]) + block(reordered(raw.iloc[a:], REORDERED),
                                                  "Program,co2_half_hour_v4,Signature,5"))
    return "refused"


@case
def program_change_renames_the_flux_column(folder):
    """co2_net renamed co2_flux from July: NEE missing from July or refused."""
    raw, ends = table()
    a = at_month(ends, 7)
    later = reordered(raw.iloc[a:], REORDERED).rename(columns={"co2_net": "co2_flux"})
    one_file(folder, block(raw.iloc[:a]) + block(later, "Program,co2_half_hour_v4,Sig,5"))
    return "refused"


@case
def program_change_renames_the_stamp_column(folder):
    raw, ends = table()
    a = at_month(ends, 7)
    later = reordered(raw.iloc[a:], REORDERED).rename(columns={"stamp": "time_end"})
    one_file(folder, block(raw.iloc[:a]) + block(later, "Program,co2_half_hour_v4,Sig,5"))
    return "refused"


@case
def program_change_without_title_lines_in_the_file(folder):
    """A file of a names line only, the names written again reordered in July."""
    raw, ends = table()
    a = at_month(ends, 7)
    write(folder / "t.csv", lines(raw.iloc[:a]) + lines(reordered(raw.iloc[a:], REORDERED)))
    toml(folder, "t.csv")


@case
def program_change_block_gains_a_units_line(folder):
    """A file of a names line only; the new block writes names and units lines: refused
    (rows_after_header = 0)."""
    raw, ends = table()
    a = at_month(ends, 7)
    write(folder / "t.csv", lines(raw.iloc[:a])
          + block(reordered(raw.iloc[a:], REORDERED), title=None))
    toml(folder, "t.csv")
    return "refused"


@case
def program_change_humidity_dropped_and_inserted_back(folder):
    """Humidity gone from May to August, back from September."""
    raw, ends = table()
    a, b = at_month(ends, 5), at_month(ends, 9)
    dropped = [n for n in REORDERED if n != "humid"]
    one_file(folder, block(raw.iloc[:a])
             + block(raw.iloc[a:b][dropped], "Program,co2_half_hour_v4,Signature,1")
             + block(raw.iloc[b:], "Program,co2_half_hour_v5,Signature,2"))
    clean = raw.copy()
    clean.iloc[a:b, clean.columns.get_loc("humid")] = "-9999"
    return canonical(folder, clean)


@case
def restart_with_the_last_record_again_with_missing_cells_crlf(folder):
    """A restart (same header) repeating the last record with -9999 in the weather
    cells, in a file of a four-line block."""
    raw, ends = table()
    a = at_month(ends, 7)
    again = raw.iloc[[a - 1]].copy()
    again.iloc[0, 2:8] = "-9999"
    one_file(folder, block(raw.iloc[:a]) + block(pd.concat([again, raw.iloc[a:]])))


def judge(name, folder, base_tables, cli):
    p53.CASES = CASES
    return p53.judge(name, folder, base_tables, cli)


def main():
    p38.probe(CASES, judge, "cases", 62)


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
