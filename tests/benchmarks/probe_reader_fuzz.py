"""Probe: can the reader be made to read a logger file WRONG? (round readfuzz54)

Run by hand from the repository root:
``.venv/bin/python tests/benchmarks/probe_reader_fuzz.py [--cases N] [--seed S] [--show KIND]``
(``N`` mutated files a layout, 90 by default: 355 cases, the tab file having no units
line to remove; ``--show`` prints every case of
a class, e.g. ``WRONG``).

Four clean files of 20 days of the invented Quillmoor grassland (``fluxpart.demo``, seed 0,
a FICTIONAL site) are written in the layouts of the project's examples: commas with a
units line; a title line, semicolons, decimal commas, date and time columns and a units
line in Latin-1; tabs with ISO stamps; fixed-width columns with a units line. Each case
applies ONE realistic mutation, drawn by a seeded ``numpy`` generator, to one of them: a
stray double quote (alone, or closed again up to 150 lines later), a delimiter deleted or
doubled in one record, one record's fields shifted by one, a line split in two, two lines
joined, a line written twice, two lines swapped, a block of lines moved, a cell replaced
by text, a digit dropped or the decimal separator swapped in one cell, the units line
removed, a header name in other case or with a trailing blank, a byte-order mark at the
start of a record line, a second file (its BOM, header and units) pasted mid-file.

Each reading is judged against the clean file's reading (``read_site_config().read()``):

- ``identical``: the same frame, values and times;
- ``noted``: values differ only at the mutated records' times, and a warning or note names
  a line within two of the mutated lines;
- ``refused``: one ``FluxpartError`` whose message names a line, a column or a setting
  (``refused?`` where it names none of them);
- ``WRONG``: values differ beyond the mutated records, or differ with no note naming the
  line (``silent``);
- ``CRASH``: any other exception.

A dropped digit or a swapped decimal separator that leaves a plausible number (``0.329``
read as ``0.39``, ``1,320`` as ``1.320`` where the two separators coincide) is undetectable
by any reader from the cell alone; such cases are counted apart as ``silent-plausible``
where the read value lies within its variable's plausible range
(``fluxpart.variables.VARIABLES``), so the table shows what a reader
could have caught. The last line prints the counts of each class.
"""
import argparse
import os
import traceback
from pathlib import Path
from tempfile import mkdtemp

import numpy as np
import pandas as pd

from fluxpart.demo import site_year
from fluxpart.errors import FluxpartError
from fluxpart.io import read_site_config
from fluxpart.variables import VARIABLES

DAYS = 20
NAMES = ["stamp_end", "co2_exchange", "solar_down", "air_temp_c", "vpd_hpa",
         "friction_velocity", "soil_temp_5cm", "rel_humidity", "qc_co2"]
UNITS = ["-", "umol m-2 s-1", "W m-2", "degC", "hPa", "m s-1", "degC", "%", "-"]
DECIMALS = [3, 1, 2, 3, 3, 2, 1, 0]
COLUMNS = dict(zip(["nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh", "nee_flag"],
                   NAMES[1:], strict=True))
SITE = """[site]
name = "Quillmoor grassland (fictional), reader fuzz"
latitude = 49.3
longitude = 10.2
utc_offset = 1.0
canopy = "short"

[input]
path = "{path}"
time_marks = "end"
missing = [-9999]
{inputs}
[input.columns]
{columns}
"""


def _cells(frame):
    """The demo's values as text, -9999 for missing, one list per column."""
    out = []
    for (_, values), decimals in zip(frame.items(), DECIMALS, strict=True):
        values = values.to_numpy(dtype=float)
        text = np.char.mod(f"%.{decimals}f", np.nan_to_num(values))
        out.append(np.where(np.isfinite(values), text, "-9999"))
    return out


def layouts():
    """name -> (lines of the clean file, index of its first record line, inputs, columns,
    file name, delimiter, encoding)."""
    frame = site_year(0)[0].iloc[:48 * DAYS]
    ends = frame.index + pd.Timedelta(minutes=30)
    cells = _cells(frame)
    out = {}

    rows = [",".join(NAMES), ",".join(UNITS)]
    stamps = ends.strftime("%Y%m%d%H%M")
    rows += [",".join(r) for r in zip(stamps, *cells, strict=True)]
    out["comma_units"] = (rows, 2, {"time_column": "stamp_end", "time_format": "%Y%m%d%H%M",
                                    "rows_after_header": 1}, COLUMNS, "t.csv", ",", "utf-8")

    comma = [np.char.replace(c, ".", ",") for c in cells]
    names = ["Date", "Time", *NAMES[1:]]
    units = ["dd.mm.yyyy", "hh:mm", *UNITS[1:3], "°C", *UNITS[4:6], "°C", *UNITS[7:]]
    rows = ["Quillmoor grassland (fictional) logger export; station 2", ";".join(names),
            ";".join(units)]
    rows += [";".join(r) for r in zip(ends.strftime("%d.%m.%Y"), ends.strftime("%H:%M"),
                                      *comma, strict=True)]
    out["semicolon_decimal_comma"] = (
        rows, 3, {"time_column": ["Date", "Time"], "time_format": "%d.%m.%Y %H:%M",
                  "rows_before_header": 1, "rows_after_header": 1, "delimiter": ";",
                  "decimal": ",", "encoding": "latin-1"}, COLUMNS, "t.dat", ";", "latin-1")

    rows = ["\t".join(NAMES)]
    rows += ["\t".join(r) for r in zip(ends.strftime("%Y-%m-%d %H:%M"), *cells, strict=True)]
    out["tab_iso"] = (rows, 1, {"time_column": "stamp_end", "time_format": "%Y-%m-%d %H:%M",
                                "delimiter": "\t"}, COLUMNS, "t.tsv", "\t", "utf-8")

    width = 18
    table = [NAMES, UNITS, *zip(stamps, *cells, strict=True)]
    rows = ["".join(f"{c:>{width}}" for c in row) for row in table]
    out["fixed_width_units"] = (
        rows, 2, {"time_column": "stamp_end", "time_format": "%Y%m%d%H%M",
                  "rows_after_header": 1, "column_widths": [width] * len(NAMES)},
        COLUMNS, "t.txt", None, "utf-8")
    return out


def _value(v):
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    return str(v) if isinstance(v, int) else '"' + str(v).replace("\t", "\\t") + '"'


def write(folder, layout, rows):
    lines, _, inputs, columns, name, _, encoding = layout
    folder.mkdir(parents=True, exist_ok=True)
    (folder / name).write_bytes(("\n".join(rows) + "\n").encode(encoding, "replace"))
    (folder / "site.toml").write_text(SITE.format(
        path=name, inputs="".join(f"{k} = {_value(v)}\n" for k, v in inputs.items()),
        columns="\n".join(f"{k} = {_value(v)}" for k, v in columns.items())))
    return folder / "site.toml"


# --------------------------------------------------------------------------- mutations
def _split(line, delimiter):
    return line.split(delimiter) if delimiter else None


def _cell_span(rng, line, delimiter, numeric=True):
    """(start, end) of a random value cell of `line` (never the stamp columns)."""
    if delimiter is None:
        width = 18
        k = int(rng.integers(1, len(line) // width))
        piece = line[k * width:(k + 1) * width]
        lead = len(piece) - len(piece.lstrip())
        return k * width + lead, (k + 1) * width
    cells = line.split(delimiter)
    first = 2 if delimiter == ";" else 1
    k = int(rng.integers(first, len(cells)))
    start = sum(len(c) + 1 for c in cells[:k])
    return start, start + len(cells[k])


def mutate(rng, kind, rows, first, delimiter):
    """`rows` changed by one mutation of `kind`: (new rows, 0-based indices of the clean
    record lines it touched, 1-based lines of the new file it touched)."""
    rows = list(rows)
    n = len(rows)
    at = int(rng.integers(first, n - 1))
    touched = [at]
    near = [at + 1]
    if kind == "stray_quote":
        s, e = _cell_span(rng, rows[at], delimiter)
        where = [s, e, int(rng.integers(s, e + 1))][int(rng.integers(3))]
        rows[at] = rows[at][:where] + '"' + rows[at][where:]
    elif kind == "quote_closed_later":
        later = min(n - 1, at + int(rng.integers(1, 151)))
        for i, position in ((at, "start"), (later, "end")):
            s, e = _cell_span(rng, rows[i], delimiter)
            where = s if position == "start" else e
            rows[i] = rows[i][:where] + '"' + rows[i][where:]
        touched = list(range(at, later + 1))
    elif kind == "delimiter_deleted":
        s, _ = _cell_span(rng, rows[at], delimiter)
        if delimiter is None:   # two fixed-width cells run together: padding dropped
            rows[at] = rows[at][:s - 1] + rows[at][s:] + " "
        else:
            rows[at] = rows[at][:s - 1] + rows[at][s:]
    elif kind == "delimiter_doubled":
        s, _ = _cell_span(rng, rows[at], delimiter)
        d = delimiter or " "
        rows[at] = rows[at][:s] + d + rows[at][s:]
    elif kind == "fields_shifted":
        if delimiter is None:
            width = 18
            rows[at] = (rows[at][:width] + " " * width + rows[at][width:])[:len(rows[at])]
        else:
            cells = rows[at].split(delimiter)
            lead = 2 if delimiter == ";" else 1
            if rng.random() < 0.5:
                cells = cells[:lead] + [""] + cells[lead:-1]
            else:
                cells = cells[:lead] + cells[lead + 1:] + [""]
            rows[at] = delimiter.join(cells)
    elif kind == "line_split":
        s, e = _cell_span(rng, rows[at], delimiter)
        cut = int(rng.integers(s, e + 1))
        rows[at:at + 1] = [rows[at][:cut], rows[at][cut:]]
        near = [at + 1, at + 2]
    elif kind == "lines_joined":
        rows[at:at + 2] = [rows[at] + rows[at + 1]]
        touched = [at, at + 1]
    elif kind == "line_duplicated":
        rows.insert(at, rows[at])
        touched, near = [], [at + 1, at + 2]
    elif kind == "lines_swapped":
        other = min(n - 1, at + int(rng.integers(1, 4)))
        rows[at], rows[other] = rows[other], rows[at]
        touched, near = [], [at + 1, other + 1]
    elif kind == "block_moved":
        size = int(rng.integers(5, 51))
        at = min(at, n - size - 1)
        block = rows[at:at + size]
        del rows[at:at + size]
        to = int(rng.integers(first, len(rows)))
        rows[to:to] = block
        touched, near = [], [at + 1, to + 1]
    elif kind == "cell_text":
        s, e = _cell_span(rng, rows[at], delimiter)
        word = ["ERR", "n/a", "overrange", "#VALUE!", "---", "fault"][int(rng.integers(6))]
        if delimiter is None:
            word = f"{word:>{e - s}}"
        rows[at] = rows[at][:s] + word + rows[at][e:]
    elif kind == "digit_dropped":
        s, e = _cell_span(rng, rows[at], delimiter)
        digits = [i for i in range(s, e) if rows[at][i].isdigit()]
        i = digits[int(rng.integers(len(digits)))] if digits else s
        rows[at] = rows[at][:i] + rows[at][i + 1:] + (" " if delimiter is None else "")
        if delimiter is None:
            rows[at] = rows[at][:s - 1] + " " + rows[at][s - 1:-1]
    elif kind == "decimal_swapped":
        s, e = _cell_span(rng, rows[at], delimiter)
        cell = rows[at][s:e]
        mark, other = (",", ".") if delimiter == ";" else (".", ",")
        rows[at] = rows[at][:s] + cell.replace(mark, other) + rows[at][e:]
    elif kind == "units_line_removed":
        if first < 2 or not any(u in rows[first - 1] for u in ("m s-1",)):
            return None
        del rows[first - 1]
        touched, near = [], [first, first + 1]
    elif kind == "header_case_or_blank":
        header = first - 2 if any(u in rows[first - 1] for u in ("m s-1",)) else first - 1
        name = NAMES[1 + int(rng.integers(len(NAMES) - 1))]
        new = name.upper() if rng.random() < 0.5 else name + " "
        if delimiter is None:
            new = f"{new:>18}"[-18:]
            name = f"{name:>18}"
        rows[header] = rows[header].replace(name, new, 1)
        touched, near = [], [header + 1]
    elif kind == "bom_in_record":
        rows[at] = "\ufeff" + rows[at]
    elif kind == "file_pasted_mid":
        head = rows[:first]
        head = ["\ufeff" + head[0], *head[1:]]
        rows[at:at] = head
        touched, near = [], list(range(at + 1, at + len(head) + 1))
    return rows, touched, near


KINDS = ["stray_quote", "quote_closed_later", "delimiter_deleted", "delimiter_doubled",
         "fields_shifted", "line_split", "lines_joined", "line_duplicated", "lines_swapped",
         "block_moved", "cell_text", "digit_dropped", "decimal_swapped",
         "units_line_removed", "header_case_or_blank", "bom_in_record", "file_pasted_mid"]


# --------------------------------------------------------------------------- judging
def _differing(clean, read):
    """Times whose values differ (NaN equal to NaN), rows missing on either side too."""
    index = clean.index.union(read.index)
    a, b = clean.reindex(index), read.reindex(index)
    columns = clean.columns.intersection(read.columns)
    differ = pd.Series(False, index=index)
    for c in columns:
        x, y = a[c], b[c]
        differ |= ~((x == y) | (x.isna() & y.isna()))
    differ |= ~index.isin(clean.index) | ~index.isin(read.index)
    return index[differ.to_numpy()]


def judge(config, clean, clean_times, touched, near, kind):
    try:
        frame, report = read_site_config(config).read()
    except FluxpartError as error:
        text = str(error)
        named = any(w in text for w in ("line ", "column ", "column '", "[input]", "header"))
        return ("refused" if named else "refused?"), text.splitlines()[0][:160]
    except Exception:                           # noqa: BLE001 - shown, counted
        return "CRASH", traceback.format_exc(limit=2).strip().splitlines()[-1][:160]
    told = [str(w) for w in [*report.warnings, *report.notes]]
    if list(frame.columns) == list(clean.columns) and frame.equals(clean):
        return "identical", f"{len(told)} note(s)"
    differ = _differing(clean, frame)
    allowed = set(clean_times[touched]) if len(touched) else set()
    local = all(t in allowed for t in differ)
    lines = set()
    for w in told:
        for word in w.replace("(", " ").replace(":", " ").replace(",", " ").split("line")[1:]:
            head = word.split()
            if head and head[0].isdigit():
                lines.add(int(head[0]))
    named = any(abs(m - n) <= 2 for m in lines for n in near)
    detail = (f"{len(differ)} time(s) differ, first {differ[0] if len(differ) else '-'}; "
              + "; ".join(w.splitlines()[0][:100] for w in told)[:220])
    if local and named:
        return "noted", detail
    if local and kind in ("digit_dropped", "decimal_swapped") and len(differ) <= 1:
        column_ok = all(
            VARIABLES[c].minimum <= frame.loc[t, c] <= VARIABLES[c].maximum
            for t in differ for c in clean.columns
            if c in VARIABLES and t in frame.index and not pd.isna(frame.loc[t, c])
            and not (t in clean.index and frame.loc[t, c] == clean.loc[t, c]))
        if column_ok:
            return "silent-plausible", detail
    return ("WRONG" if local else "WRONG-beyond"), detail


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--cases", type=int, default=90)
    parser.add_argument("--seed", type=int, default=54)
    parser.add_argument("--dir", default=None)
    parser.add_argument("--show", nargs="*", default=["WRONG", "WRONG-beyond", "CRASH",
                                                      "refused?"])
    args = parser.parse_args()
    root = Path(args.dir or mkdtemp(prefix="fluxpart-readfuzz-"))
    rng = np.random.default_rng(args.seed)
    counts = {}
    for name, layout in layouts().items():
        rows, first, *_, delimiter, _ = layout
        clean_config = write(root / name / "clean", layout, rows)
        clean, _ = read_site_config(clean_config).read()
        # the clean record lines' times: the record on line `first + i` is clean row i
        clean_times = np.full(len(rows), None, dtype=object)
        clean_times[first:first + len(clean)] = list(clean.index)
        for case in range(args.cases):
            kind = KINDS[case % len(KINDS)]
            mutated = mutate(rng, kind, rows, first, delimiter)
            if mutated is None:
                continue
            new, touched, near = mutated
            config = write(root / name / f"c{case:03d}", layout, new)
            state, detail = judge(config, clean, clean_times, touched, near, kind)
            counts.setdefault(kind, {}).setdefault(state, 0)
            counts[kind][state] += 1
            if state in args.show:
                print(f"{name:24s} {kind:22s} {state:14s} {detail}", flush=True)
    states = ["identical", "noted", "refused", "refused?", "silent-plausible", "WRONG",
              "WRONG-beyond", "CRASH"]
    print()
    print(f"{'mutation':24s}" + "".join(f"{s:>17s}" for s in states))
    total = dict.fromkeys(states, 0)
    for kind in KINDS:
        row = counts.get(kind, {})
        print(f"{kind:24s}" + "".join(f"{row.get(s, 0):17d}" for s in states))
        for s in states:
            total[s] += row.get(s, 0)
    print(f"{'all':24s}" + "".join(f"{total[s]:17d}" for s in states))
    print(f"{sum(total.values())} cases")


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    main()
