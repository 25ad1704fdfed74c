"""Data coverage of a canonical frame, and the text that ``fluxpart check`` prints.

:func:`coverage_table` summarises, per canonical variable, how much of the record
is present, the longest gap, the present period, the value range and how many
values lie outside the plausible range of :data:`fluxpart.variables.VARIABLES`.
:func:`format_check` puts it together with the :class:`fluxpart.io.ReadReport`
into plain text.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .constants import SECONDS_PER_DAY
from .variables import VARIABLES

__all__ = ["COVERAGE_COLUMNS", "coverage_table", "format_check"]

#: Columns of :func:`coverage_table`, in order.
COVERAGE_COLUMNS = ("unit", "present_share", "present", "longest_gap_records",
                    "longest_gap_days", "first_present", "last_present", "minimum", "maximum",
                    "outside_range")


def coverage_table(frame: pd.DataFrame, interval_minutes: int) -> pd.DataFrame:
    """Coverage of each canonical variable in `frame`.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical frame (regular time index of interval starts); columns that are
        not canonical variables are ignored.
    interval_minutes : int
        Record interval [minutes].

    Returns
    -------
    pandas.DataFrame
        One row per canonical variable present as a column (canonical order), index
        named ``"variable"``, columns :data:`COVERAGE_COLUMNS`: ``unit``;
        ``present_share`` [1], share of records with a finite value; ``present``,
        their count; ``longest_gap_records`` and ``longest_gap_days`` [days], the
        longest run of consecutive missing records (leading and trailing runs
        included); ``first_present`` and ``last_present``, interval starts of the
        first and last finite value (NaT if none); ``minimum`` and ``maximum`` in
        the canonical unit (NaN if none); ``outside_range``, finite values outside
        the plausible range.

    Notes
    -----
    The frame is not modified.
    """
    records_per_day = SECONDS_PER_DAY / (60.0 * interval_minutes)
    rows = {}
    for name in (n for n in VARIABLES if n in frame.columns):
        values = frame[name].to_numpy(dtype=float)
        present = np.isfinite(values)
        gap = _longest_run(~present)
        variable = VARIABLES[name]
        finite = values[present]
        where = np.flatnonzero(present)
        rows[name] = {
            "unit": variable.unit,
            "present_share": float(present.mean()) if values.size else float("nan"),
            "present": int(present.sum()),
            "longest_gap_records": gap,
            "longest_gap_days": gap / records_per_day,
            "first_present": frame.index[where[0]] if where.size else pd.NaT,
            "last_present": frame.index[where[-1]] if where.size else pd.NaT,
            "minimum": float(finite.min()) if finite.size else float("nan"),
            "maximum": float(finite.max()) if finite.size else float("nan"),
            "outside_range": int(np.sum((finite < variable.minimum)
                                        | (finite > variable.maximum))),
        }
    table = pd.DataFrame.from_dict(rows, orient="index", columns=list(COVERAGE_COLUMNS))
    table.index.name = "variable"
    return table


def format_check(site, report, table: pd.DataFrame, problems=(), notes=()) -> str:
    """The plain text printed by ``fluxpart check``.

    Parameters
    ----------
    site : fluxpart.Site
        The site.
    report : fluxpart.io.ReadReport
        What the reader found.
    table : pandas.DataFrame
        From :func:`coverage_table`.
    problems : sequence of str, optional
        Problems found beyond the reader's (clock, preflight), listed after them.
    notes : sequence of str, optional
        The reader's notes (``report.notes``: a layout understood, every value read as the
        file means it), listed apart from the problems.

    Returns
    -------
    str
        Site, period, interval, records, stamps inserted, columns read, the coverage
        table as aligned text (with a line saying what the ``nee_flag`` row counts, where
        it is present), every problem found and the reader's notes (how it understood the
        layout, no problem), ending with a newline.
    """
    lines = [
        f"site              {site.name} (latitude {site.latitude:g}, longitude "
        f"{site.longitude:g}, UTC{site.utc_offset:+g} h local standard time)",
        str(report),
        "",
        "coverage",
        _format_table(table),
        "",
    ]
    if "nee_flag" in table.index:
        # the row holds the combined verdict, not the file's flag values (0/2 read as 0/1)
        lines[-1:-1] = ["nee_flag: the verdict of the site's flag column(s), 0 = kept, "
                        "1 = rejected (which of the file's values keep a record: the site flag line above)"]
    listed = [*report.warnings, *problems]
    if listed:
        lines.append(f"problems found ({len(listed)})")
        lines.extend(f"  - {warning}" for warning in listed)
    else:
        lines.append("problems found: none")
    if notes:
        # how the layout was understood: no problem, no exit 1 (review64)
        lines.append(f"notes (the file was read as it means) ({len(notes)})")
        lines.extend(f"  - {note}" for note in notes)
    return "\n".join(lines) + "\n"


def _longest_run(mask: np.ndarray) -> int:
    """Length of the longest run of True in a boolean array."""
    if not mask.any():
        return 0
    padded = np.concatenate([[0], mask.astype(np.int8), [0]])
    edges = np.diff(padded)
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    return int((ends - starts).max())


def _format_table(table: pd.DataFrame) -> str:
    # the gap's length in records, then in days: "261 (5.4 d)" read as a unitless 261
    header = ["variable", "unit", "present", "longest gap [records]", "first present",
              "last present",
              "min", "max", "outside"]
    body = []
    for name, row in table.iterrows():
        body.append([
            str(name), row["unit"], f"{row['present_share']:.1%}",
            f"{row['longest_gap_records']} ({row['longest_gap_days']:.1f} d)",
            _stamp(row["first_present"]), _stamp(row["last_present"]),
            f"{row['minimum']:.4g}", f"{row['maximum']:.4g}", str(row["outside_range"]),
        ])
    widths = [max(len(r[i]) for r in [header, *body]) for i in range(len(header))]
    left = {0, 1, 4, 5}
    return "\n".join(
        "  ".join(cell.ljust(w) if i in left else cell.rjust(w)
                  for i, (cell, w) in enumerate(zip(r, widths, strict=True))).rstrip()
        for r in [header, *body])


def _stamp(value) -> str:
    return "-" if pd.isna(value) else pd.Timestamp(value).strftime("%Y-%m-%d %H:%M")
