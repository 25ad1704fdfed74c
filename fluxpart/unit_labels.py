"""A unit written in one input file's units line, told apart by that file's values.

Where several input files are read with one ``[input.units]`` and the units line of some
of them writes another unit of a variable (a logger program changed its output unit part
way through the record), the reader had warned twice (the units lines differ; a month looks
like another unit) and read every file in the declared unit. Where the months that look
like another unit all lie in the files whose units line writes another unit, the file
says it and the values agree: two readings are possible (as declared, or as the label
says) and they move the budget, so the record is refused naming both.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from fluxpart.variables import same_unit_key

_MONTHS = re.compile(r"\): in \d+ month\(s\) \(([^)]*)\)")


def relabelled_files(name: str, labels: list, read_key) -> dict:
    """The input files whose units line writes another unit of `name` than the one read.

    Parameters
    ----------
    name : str
        Canonical variable (``"rg"``, ``"vpd"``, ...).
    labels : list of (str, tuple of str)
        Per input file, its source and the cells under the variable's column in the lines
        between header and data (``rows_after_header``).
    read_key : tuple
        :func:`fluxpart.variables.same_unit_key` of the unit the values are read in.

    Returns
    -------
    dict
        Source -> the cell naming another known unit of `name` (statistics such as
        "Avg" and unknown words are no unit and not listed).

    References
    ----------
    A unit written once per column above the records is how logger programs and exports
    state their units (common practice); conversions are those of
    :mod:`fluxpart.variables`.
    """
    found = {}
    for source, cells in labels:
        for cell in cells:
            key = same_unit_key(name, cell) if cell else ("text", "")
            if key[0] == "unit" and key != read_key:
                found[source] = cell
                break
    return found


def relabelled_months_message(name: str, column: str, suspicion: str, read_unit: str,
                              relabelled: dict, starts: pd.DatetimeIndex,
                              sources: np.ndarray) -> str | None:
    """The refusal where every month whose values look like another unit lies in files
    whose units line writes another unit (None where they do not agree).

    Parameters
    ----------
    name, column : str
        Canonical variable and its column in the files.
    suspicion : str
        The month-by-month warning of :mod:`fluxpart.unit_checks` for `name`
        ("column 'x' (rg): in 1 month(s) (2021-07) the values alone look like ...").
    read_unit : str
        The unit every file is read in (``[input.units]`` or the canonical unit).
    relabelled : dict
        From :func:`relabelled_files`: source -> unit its units line writes.
    starts : pandas.DatetimeIndex
        Interval starts of the records (local standard time).
    sources : numpy.ndarray
        The input file of each record, aligned with `starts`.

    Returns
    -------
    str or None
        One line naming the column, the files and both readings, with the fix.

    References
    ----------
    Two pieces of evidence from the file itself (its label, its values) against one
    setting: the reader refuses where two readings are possible and move the budget
    (DEVELOPERS.md, Rules of the house).
    """
    if not relabelled:
        return None
    found = _MONTHS.search(suspicion)
    if found is None:
        return None
    flagged = {month.strip() for month in found.group(1).split(",") if month.strip()}
    in_relabelled = np.isin(np.asarray(sources, dtype=object), list(relabelled))
    months_relabelled = set(pd.DatetimeIndex(starts)[in_relabelled].strftime("%Y-%m"))
    if not flagged or not flagged <= months_relabelled:
        return None
    return (f"column {column!r} ({name}): {_written_otherwise(relabelled, read_unit)}, "
            f"and the values of {len(flagged)} month(s) of those files "
            f"({', '.join(sorted(flagged))}) look like another unit too; read as declared, "
            "those months are in the wrong unit; read as labelled, they need a unit of "
            "their own, which one [input.units] cannot give: convert the values of those "
            "files in a copy (or, if the label is wrong and the values right, list "
            f"{name} in [input] accept_units)")


def _written_otherwise(relabelled: dict, read_unit: str) -> str:
    """"the units line of 2 input file(s) writes another unit than the 'degC' every file
    is read in: 'a.csv' ('K'), 'b.csv' ('K')" (three files named, then a count)."""
    files = sorted(relabelled)
    named = ", ".join(f"{source!r} ({relabelled[source]!r})" for source in files[:3])
    if len(files) > 3:
        named += f" and {len(files) - 3} more"
    return (f"the units line of {len(files)} input file(s) writes another unit than the "
            f"{read_unit!r} every file is read in: {named}")


def relabelled_range_clause(relabelled: dict, read_unit: str) -> str:
    """What a range refusal adds where some input files' units line writes another unit
    (:func:`relabelled_files`); '' where none does.

    A unit changed between the files (a logger program writing kelvin from July) left the
    refusal naming the range alone, and its fix (``[input.units]``) then refused the other
    files; the files' own labels are named, as :func:`relabelled_months_message` names
    them (round layouts50). The values are not read in the label's unit: one
    ``[input.units]`` reads every file.

    Parameters
    ----------
    relabelled : dict
        From :func:`relabelled_files`: source -> unit its units line writes.
    read_unit : str
        The unit every file is read in (``[input.units]`` or the canonical unit).

    Returns
    -------
    str
        The clause, opening with "; ", or ''.

    References
    ----------
    A unit written once per column above the records is how logger programs and exports
    state their units (common practice).
    """
    if not relabelled:
        return ""
    return (f"; {_written_otherwise(relabelled, read_unit)} (a unit changed between the "
            "files, which one [input.units] setting cannot read: convert that column of "
            "those files in a copy)")
