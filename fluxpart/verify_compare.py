"""Comparing a stored table with its recomputation, for :func:`fluxpart.verify.verify`.

A table is compared value by value (:func:`compare_tables`): bit for bit, or within
floating-point rounding (:data:`ROUNDING_TOLERANCE` relative to the larger value; a
near-zero value relative to :data:`NEAR_ZERO_SHARE` of its column; a column that is the
difference of others relative to them; a fitted parameter relative to its standard error,
and the standard error itself to :data:`STANDARD_ERROR_TOLERANCE`), or beyond it. Each way
in which the two differ is a :class:`Difference`. A Parquet file's schema and metadata
(types, units, descriptions, the site) are compared key by key
(:func:`metadata_differences`), a description worded as an earlier release wrote it told
apart (:func:`earlier_wordings`). ``diff`` shares :func:`within_rounding`,
:func:`compare_tables` and :func:`field_differences`. The reasons for each tolerance are
given in :mod:`fluxpart.verify` and beside each constant.

References
----------
Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM,
§1.7 (cancellation: a difference's rounding is its operands') (m).
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .schema import reworded
from .store import read_table

#: SHA-256 of no bytes (FIPS 180-4; ``hashlib.sha256(b"").hexdigest()``): an input or site
#: config with this digest is a file cut to nothing (a copy or sync cut short), which verify
#: says in words where the digest alone meant nothing to a reader (review75)
EMPTY_SHA256 = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"


#: Largest relative difference of a float value still classed as floating-point rounding.
ROUNDING_TOLERANCE = 1e-6


#: Standard errors of fitted parameters (a column ``X_se`` beside ``X`` in a
#: ``parameters_*`` table) are compared to
#: this relative tolerance, and each parameter ``X`` relative to the larger of itself and
#: its standard error. A standard error is taken from the curvature where the fit
#: stopped, and the fits stop once a step is below 0.01 standard errors
#: (:mod:`fluxpart.partition.daytime`): on another CPU a fit that rounding moved can stop a
#: step apart, and for a parameter the data barely determine (β0 = 15.5 ± 299 µmol m-2
#: s-1) its standard error moved by 1e-6 to 6e-6 (review round twelve). 1e-4 leaves a
#: margin of 15 over that, and stays two orders below the precision to which a standard
#: error is itself known, about 1/√(2(n − p)), 1–10 % for windows of 50–5000 records
#: (m). Budgets, fluxes and parameters keep :data:`ROUNDING_TOLERANCE`.
STANDARD_ERROR_TOLERANCE = 1e-4


#: Values smaller than this share of their column's largest magnitude are compared
#: relative to that share instead (relative differences of near-zero values mean nothing).
NEAR_ZERO_SHARE = 1e-3


#: Differing columns listed per table before the rest are summarised.
_MAX_COLUMNS_LISTED = 5


@dataclass(frozen=True)
class Difference:
    """One way in which a stored result differs from its recomputation.

    Attributes
    ----------
    table : str
        Table name (``"annual"``, ...), ``"manifest"``, ``"folder"`` or ``"input"``.
    kind : str
        ``"value"`` (cells of a column differ beyond rounding), ``"rounding"``
        (float cells differ within :data:`ROUNDING_TOLERANCE`), ``"hash"`` (a
        file's SHA-256 is not the recorded one), ``"input"`` (the input or site
        config is another file), ``"file"`` (missing or unreadable), ``"extra"``
        (a file the manifest does not list), ``"seal"`` (the manifest was edited),
        ``"table"`` (a table only on one side), ``"columns"``, ``"rows"``,
        ``"index"``, ``"dtype"``, ``"more"`` (further differing columns, listed
        in `stored`), ``"manifest"`` (a manifest field differs; `column` names it)
        or ``"metadata"`` (a table's column type, unit or description, or a key of
        its table metadata, differs; `column` names it).
    column : str or None
        Column or manifest field at fault.
    row : str or None
        ``"<index name>=<value>"`` of the first (or, for rounding, the largest)
        differing row.
    stored, recomputed : str
        The two values as text (full precision for numbers).
    count : int
        How many cells (or rows) of the column differ.
    relative : float
        Largest relative difference of the column (``"value"`` and ``"rounding"``
        of float columns; NaN otherwise).
    cause : str
        Of an ``"input"``: why the file is another one. Of a ``"metadata"``: how the
        table's values compare (``""`` equal, ``"values within rounding"``, ``"values
        differ too"``).
    """

    table: str
    kind: str
    column: str | None = None
    row: str | None = None
    stored: str = ""
    recomputed: str = ""
    count: int = 1
    relative: float = float("nan")
    cause: str = ""

    def describe(self) -> str:
        """Return one line naming the location and both values."""
        if self.kind == "rounding" and self.table == "manifest":
            return (f"manifest field {self.column!r} within rounding: stored {self.stored}, "
                    f"recomputed {self.recomputed} (relative difference {self.relative:.3g})")
        if self.kind in ("value", "rounding"):
            more = f" ({self.count} rows differ" if self.count > 1 else " (1 row differs"
            relative = (f"; largest relative difference {self.relative:.3g})"
                        if np.isfinite(self.relative) else ")")
            within = " within rounding" if self.kind == "rounding" else ""
            return (f"{self.table}: column {self.column!r}{within} at {self.row}: stored "
                    f"{self.stored}, recomputed {self.recomputed}{more}{relative}")
        if self.kind == "more":
            return f"{self.table}: {self.count} more column(s) differ: {self.stored}"
        if self.kind == "input":
            now = (f"is now empty (0 bytes, SHA-256 {self.recomputed})"
                   if self.recomputed == EMPTY_SHA256 else f"has SHA-256 {self.recomputed}")
            cause = self.cause or f"it is not the {self.column} the result was computed from"
            return (f"{self.column} {self.row} {now}, but the manifest records "
                    f"{self.stored}: {cause}, so nothing was recomputed")
        if self.kind == "hash":
            return (f"{self.table}: file SHA-256 {self.recomputed} is not the {self.stored} "
                    f"recorded in manifest.json ({self.column or 'the file'} was changed after "
                    "it was written)")
        if self.kind in ("seal", "extra", "format"):
            return f"{self.table}: {self.column} {self.stored}"
        if self.kind == "file":
            return f"{self.table}: {self.stored} {self.recomputed}"
        if self.kind == "manifest":
            return (f"manifest field {self.column!r} differs: stored {self.stored}, "
                    f"recomputed {self.recomputed}")
        if self.kind == "table":
            return f"{self.table}: stored {self.stored}, recomputed {self.recomputed}"
        if self.kind == "metadata":
            return (f"{self.table}: metadata {self.column!r} differs "
                    f"({self.cause or 'values equal'}): stored {self.stored!r}, recomputed "
                    f"{self.recomputed!r}")
        where = f" column {self.column!r}" if self.column else ""
        at = f" at {self.row}" if self.row else ""
        return (f"{self.table}:{where}{at} {self.kind} differ: stored {self.stored}, "
                f"recomputed {self.recomputed}")


#: Where a metadata key of :func:`metadata_differences` names a column: a field's own
#: ``"<column> <what>"``, the fluxpart JSON's ``fluxpart.columns.<column>.<what>`` and the
#: pandas copy's ``PANDAS_ATTRS.<what>s.<column>``.
_METADATA_KEYS = (re.compile(r"PANDAS_ATTRS\.(?P<what>units|descriptions)\.(?P<column>.+)"),
                  re.compile(r"fluxpart\.columns\.(?P<column>.+)\.(?P<what>\w+)"),
                  re.compile(r"(?P<column>[^ ]+) (?P<what>type|unit|description)"))


def _metadata_item(key: str) -> tuple[str, str | None]:
    """(what differs in the plural, column or None) of a metadata key: the three copies of
    one column's description are one item (``"descriptions"``, the column)."""
    for pattern in _METADATA_KEYS:
        match = pattern.fullmatch(str(key))
        if match:
            return match["what"].removesuffix("s") + "s", match["column"]
    return str(key), None


def _show(value) -> str:
    if value is None or (isinstance(value, float) and np.isnan(value)) or value is pd.NaT:
        return "missing"
    if isinstance(value, (float, np.floating)):
        return repr(float(value))
    if isinstance(value, (np.integer, np.bool_)):
        return repr(value.item())
    return repr(value) if isinstance(value, str) else str(value)


def _row_label(index: pd.Index, position: int) -> str:
    return f"{index.name or 'row'}={index[position]}"


def _unequal(left: pd.Series, right: pd.Series) -> np.ndarray:
    """Positions where two same-length columns differ (missing equals missing)."""
    a, b = left.reset_index(drop=True), right.reset_index(drop=True)
    both_missing = a.isna().to_numpy() & b.isna().to_numpy()
    try:
        same = a.eq(b).fillna(False).to_numpy(dtype=bool)
    except (TypeError, ValueError):
        same = np.array([x == y for x, y in zip(a.tolist(), b.tolist(), strict=True)],
                        dtype=bool)
    return ~(same | both_missing)


#: Columns that are differences of other columns of the same row, with the columns they
#: are computed from (agreement.method_agreement, pipeline's u* scenario spread): the
#: rounding of a difference is the rounding of its operands, so it is compared relative
#: to their magnitude, not its own (cancellation, Higham 2002 §1.7 (m)). Without this a
#: method difference of 0.001 g C m-2 from two daily sums of 1 g C m-2 read a relative
#: rounding of 1e-8 in each sum as 2.6e-5 in the difference: NOT reproduced on a CPU
#: with AVX-512 switched off (review round twelve).
_DIFFERENCE_OPERANDS = (
    (re.compile(r"(gpp|reco)_method_difference"), ("{0}_daytime", "{0}_nighttime"), False),
    (re.compile(r"(gpp|reco)_relative_difference"), ("{0}_daytime", "{0}_nighttime"), True),
    (re.compile(r"(.+)_ustar_spread"), ("{0}_ustar_p16", "{0}_ustar_p50", "{0}_ustar_p84"),
     False),
)


def _operand_scale(column, stored: pd.DataFrame, recomputed: pd.DataFrame):
    """Per-row magnitude of the operands a difference column is computed from (the larger
    of the stored and recomputed values; for a relative difference divided by the mean of
    the two it is relative to); None for a column that is no difference of others."""
    found = [(pattern.fullmatch(str(column)), templates, relative)
             for pattern, templates, relative in _DIFFERENCE_OPERANDS]
    found = [(match, templates, relative) for match, templates, relative in found if match]
    if not found:
        return None
    match, templates, relative = found[0]
    operands = [t.format(match[1]) for t in templates]
    if not all(c in stored.columns and c in recomputed.columns for c in operands):
        return None
    values = [frame[c].to_numpy(dtype=np.float64) for frame in (stored, recomputed)
              for c in operands]
    with np.errstate(invalid="ignore", divide="ignore"):
        scale = np.fmax.reduce(np.abs(np.vstack(values)), axis=0)
        if relative:
            # (day - night) / |mean(day, night)|, the mean of the stored values
            mean = np.abs(0.5 * (values[0] + values[1]))
            scale = np.where(mean > 0, scale / mean, np.nan)
    return np.where(np.isfinite(scale), scale, 0.0)


def _float_column(left: pd.Series, right: pd.Series, operand_scale=None,
                  tolerance: float = ROUNDING_TOLERANCE):
    """(differs bitwise, beyond rounding, relative difference) of two float64 columns.

    `operand_scale` (per row, optional): the magnitude of the operands of a difference
    column (or a parameter's standard error), the reference of its relative difference
    where larger than the values. `tolerance`: the largest relative difference that is
    rounding.
    """
    a = left.to_numpy(dtype=np.float64, copy=True)
    b = right.to_numpy(dtype=np.float64, copy=True)
    nan_a, nan_b = np.isnan(a), np.isnan(b)
    differs = (a.view(np.int64) != b.view(np.int64)) & ~(nan_a & nan_b)
    relative = np.zeros(len(a))
    beyond = differs & (nan_a != nan_b)
    both = differs & ~nan_a & ~nan_b
    if both.any():
        with np.errstate(invalid="ignore", over="ignore"):
            finite = np.isfinite(a) & np.isfinite(b)
            scale = np.nanmax(np.abs(np.concatenate([a[np.isfinite(a)], b[np.isfinite(b)]]))
                              ) if (np.isfinite(a) | np.isfinite(b)).any() else 0.0
            reference = np.maximum(np.maximum(np.abs(a), np.abs(b)), NEAR_ZERO_SHARE * scale)
            if operand_scale is not None:
                reference = np.maximum(reference, operand_scale)
            gap = np.abs(a - b)
            relative = np.where(both & finite & (reference > 0), gap / np.where(
                reference > 0, reference, 1.0), np.where(both, np.inf, 0.0))
        beyond |= both & ~(relative <= tolerance)
    return differs, beyond, relative


def _standard_error_scale(column, stored: pd.DataFrame, recomputed: pd.DataFrame):
    """Per-row standard error of a fitted parameter whose table holds ``<column>_se`` (the
    larger of the stored and recomputed), None for any other column."""
    name = f"{column}_se"
    if name not in stored.columns or name not in recomputed.columns:
        return None
    values = np.vstack([frame[name].to_numpy(dtype=np.float64) for frame in (stored, recomputed)])
    with np.errstate(invalid="ignore"):
        scale = np.fmax.reduce(np.abs(values), axis=0)
    return np.where(np.isfinite(scale), scale, 0.0)


def _is_standard_error(column, stored: pd.DataFrame) -> bool:
    """Whether `column` is ``X_se`` beside a parameter ``X`` of the same table."""
    return str(column).endswith("_se") and str(column)[:-3] in stored.columns


def _is_float(series: pd.Series) -> bool:
    return pd.api.types.is_float_dtype(series.dtype)


def within_rounding(column, first: pd.DataFrame, second: pd.DataFrame,
                    row_scale=None) -> np.ndarray:
    """Rows where a float column of two tables of equal index differs, but only within
    :data:`ROUNDING_TOLERANCE`, judged as :func:`compare_tables` judges it (relative to
    the larger value, a near-zero value to :data:`NEAR_ZERO_SHARE` of the column, a
    difference column to its operands).

    Parameters
    ----------
    column : str
        A column both tables hold.
    first, second : pandas.DataFrame
        Two tables of the same index (rows in the same order).
    row_scale : numpy.ndarray, optional
        Per row, the magnitude of the values the column's value is computed beside (in
        its unit): a near-zero value is then judged relative to :data:`NEAR_ZERO_SHARE`
        of it as well as of the column (a table of one row has no column scale to speak
        of; ``diff``'s annual values, round faults46).

    Returns
    -------
    numpy.ndarray of bool
        Per row: the values are not bit for bit equal but equal within rounding. All
        False where the column is no float column in both.

    References
    ----------
    Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed.,
    SIAM, §1.7 (cancellation: a difference's rounding is its operands') (m).
    """
    left, right = first[column], second[column]
    if not (_is_float(left) and _is_float(right)):
        return np.zeros(len(left), dtype=bool)
    scale = _operand_scale(column, first, second)
    if row_scale is not None:
        floor = NEAR_ZERO_SHARE * np.nan_to_num(np.asarray(row_scale, dtype=np.float64))
        scale = floor if scale is None else np.maximum(scale, floor)
    differs, beyond, _ = _float_column(left, right, scale)
    return differs & ~beyond


def compare_tables(name: str, stored: pd.DataFrame, recomputed: pd.DataFrame) -> list:
    """Compare two versions of a table value by value.

    Parameters
    ----------
    name : str
        The table's name in the manifest (``"annual"``, ``"parameters_daytime"``, ...): a
        ``parameters_*`` table's standard errors take :data:`STANDARD_ERROR_TOLERANCE`.
    stored, recomputed : pandas.DataFrame
        The table as the folder holds it and as the rerun wrote it.

    Returns
    -------
    list of Difference
        ``"rounding"`` entries for float columns that differ only within
        :data:`ROUNDING_TOLERANCE`; ``"value"`` and structural entries for
        everything else.
    """
    out = []
    if list(stored.columns) != list(recomputed.columns):
        only_stored = [c for c in stored.columns if c not in recomputed.columns]
        only_new = [c for c in recomputed.columns if c not in stored.columns]
        out.append(Difference(name, "columns", stored=f"extra {only_stored}" if only_stored
                              else "same names, other order" if not only_new else "-",
                              recomputed=f"extra {only_new}" if only_new else "-"))
    if len(stored) != len(recomputed):
        out.append(Difference(name, "rows", stored=f"{len(stored)} rows",
                              recomputed=f"{len(recomputed)} rows"))
        return out
    index_differs = _unequal(pd.Series(stored.index), pd.Series(recomputed.index))
    if index_differs.any():
        position = int(np.flatnonzero(index_differs)[0])
        out.append(Difference(name, "index", column=stored.index.name, row=f"row {position}",
                              stored=_show(stored.index[position]),
                              recomputed=_show(recomputed.index[position]),
                              count=int(index_differs.sum())))
        return out
    listed, unlisted = 0, []
    for column in [c for c in stored.columns if c in recomputed.columns]:
        left, right = stored[column], recomputed[column]
        if _is_float(left) and _is_float(right):
            fitted = str(name).startswith("parameters")     # tables of fitted parameters
            scale = _operand_scale(column, stored, recomputed)
            if scale is None and fitted:
                scale = _standard_error_scale(column, stored, recomputed)
            differs, beyond, relative = _float_column(
                left, right, scale, STANDARD_ERROR_TOLERANCE
                if fitted and _is_standard_error(column, stored) else ROUNDING_TOLERANCE)
            kind = "value" if beyond.any() else "rounding"
            shown = beyond if beyond.any() else differs
            position = (int(np.flatnonzero(beyond)[0]) if beyond.any()
                        else int(np.argmax(np.where(differs, relative, -1.0)))
                        if differs.any() else 0)        # an empty table has no position
            largest = float(np.max(relative[differs])) if differs.any() else float("nan")
        else:
            differs = _unequal(left, right)
            kind, shown = "value", differs
            position = int(np.flatnonzero(differs)[0]) if differs.any() else 0
            largest = float("nan")
        if differs.any():
            if kind == "value" and listed >= _MAX_COLUMNS_LISTED:
                unlisted.append(str(column))
                continue
            out.append(Difference(name, kind, column=str(column),
                                  row=_row_label(stored.index, position),
                                  stored=_show(left.iloc[position]),
                                  recomputed=_show(right.iloc[position]),
                                  count=int(shown.sum()), relative=largest))
            listed += kind == "value"
        elif left.dtype != right.dtype:
            out.append(Difference(name, "dtype", column=str(column), stored=str(left.dtype),
                                  recomputed=str(right.dtype)))
    if unlisted:
        out.append(Difference(name, "more", stored=", ".join(unlisted), count=len(unlisted)))
    return out


def field_differences(stored, recomputed, prefix: str) -> list[tuple[str, object, object]]:
    """Every leaf of two JSON values that differs, as ``(dotted name, stored, recomputed)``.

    Dictionaries are walked key by key (a key on one side only is a difference);
    lists and other values are compared whole.

    Parameters
    ----------
    stored, recomputed : object
        Two JSON values (a manifest or a part of one, a schema record).
    prefix : str
        The dotted name of the two values ("" at the top).

    Returns
    -------
    list of (str, object, object)
        ``(dotted name, stored, recomputed)`` per differing leaf, ``"(absent)"`` for a
        key on one side only; empty where the two are equal.
    """
    if isinstance(stored, dict) and isinstance(recomputed, dict):
        out = []
        for key in sorted(set(stored) | set(recomputed), key=str):
            name = f"{prefix}.{key}" if prefix else str(key)
            if key not in stored:
                out.append((name, "(absent)", recomputed[key]))
            elif key not in recomputed:
                out.append((name, stored[key], "(absent)"))
            else:
                out += field_differences(stored[key], recomputed[key], name)
        return out
    return [] if stored == recomputed else [(prefix, stored, recomputed)]


def _schema_record(path: Path) -> dict:
    """A Parquet file's metadata as a JSON-like dict: ``"<column> type"`` and
    ``"<column> <key>"`` (unit, description) for every field, and the table's own
    key-value metadata under its key (the fluxpart JSON parsed, so that
    :func:`field_differences` names e.g. ``fluxpart.site.utc_offset``)."""
    import pyarrow.parquet as pq

    from .store import parquet_source

    with parquet_source(path) as source:
        schema = pq.read_schema(source)
    out = {}
    for item in schema:
        out[f"{item.name} type"] = str(item.type)
        for key, value in (item.metadata or {}).items():
            out[f"{item.name} {key.decode(errors='replace')}"] = value.decode(errors="replace")
    for key, value in (schema.metadata or {}).items():
        text = value.decode(errors="replace")
        try:
            out[key.decode(errors="replace")] = json.loads(text)
        except ValueError:
            out[key.decode(errors="replace")] = text
    return out


def metadata_differences(stored: Path, recomputed: Path) -> list[tuple[str, str, str]]:
    """What differs between two Parquet files' schemas and metadata.

    Parameters
    ----------
    stored, recomputed : path
        The two Parquet files.

    Returns
    -------
    list of (key, stored, recomputed)
        One entry per differing item, sorted by key: a column's type, unit or
        description, or a key of the table metadata (e.g.
        ``fluxpart.site.utc_offset``); ``"(absent)"`` where one side lacks it; values
        other than text as JSON. Empty when the two files describe their columns and
        table alike.

    Notes
    -----
    Equal values with unequal metadata are a different result: a unit or the
    site's UTC offset changed in a table's metadata changes what its numbers mean
    to every reader (``fluxpart.load`` hands them to the modeller).

    The ``PANDAS_ATTRS`` copy of the metadata for ``pandas.read_parquet``
    (:data:`fluxpart.store.PANDAS_ATTRS_KEY`, written since 0.23.0) is
    compared where the stored file has it (an edited unit there is named like any
    other); a table written before it lacks the key, which is no difference: the
    key repeats the ``fluxpart`` metadata compared above.
    """
    from .store import PANDAS_ATTRS_KEY

    def text(value):
        return value if isinstance(value, str) else json.dumps(value, sort_keys=True)

    before, now = _schema_record(Path(stored)), _schema_record(Path(recomputed))
    copy = PANDAS_ATTRS_KEY.decode()
    if copy not in before:
        now.pop(copy, None)
    found = field_differences(before, now, "")
    return [(key, text(old), text(new)) for key, old, new in found]


#: The table metadata key of the time convention, in the fluxpart JSON and the pandas
#: copy (:func:`metadata_differences`).
_TIME_CONVENTION_KEYS = ("fluxpart.time_convention", "PANDAS_ATTRS.time_convention")


def earlier_wordings(table: str, found: list) -> tuple[list, list]:
    """Split a table's metadata differences into an earlier release's wording and the rest.

    Parameters
    ----------
    table : str
        The table's name in the manifest.
    found : list of (key, stored, recomputed)
        :func:`metadata_differences` of its stored file and its rerun.

    Returns
    -------
    known : list of (release, column)
        One per differing copy of a description (or the ``time_convention``) whose
        stored text is exactly the wording the releases before `release` wrote
        (:data:`fluxpart.schema.REWORDED_DESCRIPTIONS`).
    rest : list of (key, stored, recomputed)
        Everything else: a unit, a site fact, a description no release wrote (an
        edited folder), each still a difference.
    """
    known, rest = [], []
    for key, stored, recomputed in found:
        what, column = _metadata_item(key)
        entry = (reworded(table, column, stored) if what == "descriptions" else
                 reworded(table, None, stored) if key in _TIME_CONVENTION_KEYS else None)
        if entry is None:
            rest.append((key, stored, recomputed))
        else:
            known.append((entry.release, column or "time_convention"))
    return known, rest


def earlier_wording_notes(worded: dict, manifest: dict, others: bool = False) -> list[str]:
    """The notes of :func:`verify` on descriptions worded as an earlier release wrote them.

    Parameters
    ----------
    worded : dict
        Release that reworded them -> table -> columns (with repeats: a description is
        stored three times per column), from :func:`earlier_wordings`.
    manifest : dict
        The folder's manifest (its writing release is named where recorded).
    others : bool
        Whether anything else differs (a value, within rounding or not, another
        description, a manifest field): the note then says those differences stand
        apart from these words, not that the words are all that differs (a 0.34.0
        folder verified after widths52 read "every value ... equals the recomputation"
        below sixteen differing values; round review67).

    Returns
    -------
    list of str
        One note per rewording release, naming the tables and columns.
    """
    code = manifest.get("code") if isinstance(manifest.get("code"), dict) else {}
    writer = f"release {code['version']}" if code.get("version") else "an earlier release"
    notes = []
    for release, tables in sorted(worded.items()):
        columns = {table: sorted(set(named) - {"time_convention"})
                   for table, named in sorted(tables.items())}
        listed = [f"{table}: {', '.join(named)}" for table, named in columns.items() if named]
        # the time convention is every table's: named once, not in 15 lines (10-01 runs)
        timed = [table for table, named in tables.items() if "time_convention" in named]
        if timed:
            listed.append(f"the time_convention of {len(timed)} table(s)" if len(timed) > 3
                          else f"the time_convention of {', '.join(sorted(timed))}")
        listed = "; ".join(listed)
        tail = ("these words are no difference; the differences listed are apart from them"
                if others else "every value and every other description equals the "
                "recomputation, so the file bytes differ from the rerun's by these words only")
        notes.append(f"descriptions worded as {writer} wrote them, before {release} reworded "
                     f"them (fluxpart.schema.REWORDED_DESCRIPTIONS): {listed}; {tail}")
    return notes


def _lacks_pandas_copy(path: Path) -> bool:
    """Whether a stored table lacks the ``PANDAS_ATTRS`` metadata key (a table written
    before 0.23.0; :data:`fluxpart.store.PANDAS_ATTRS_KEY`)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    from .store import PANDAS_ATTRS_KEY, parquet_source

    try:
        with parquet_source(path) as source:
            return PANDAS_ATTRS_KEY not in (pq.read_schema(source).metadata or {})
    except (OSError, ValueError, pa.ArrowException):
        return False


def _file_changed(table: str, differences) -> bool:
    """Whether the folder check found `table`'s file other than the recorded one (its
    SHA-256)."""
    return any(d.table == table and d.kind == "hash" for d in differences)


@dataclass(frozen=True)
class TableFindings:
    """What :func:`rerun_table_findings` found, table by table.

    Attributes
    ----------
    names : list of str
        Every table of the stored or the rerun's manifest, sorted.
    differences, rounding : list of Difference
        What differs, and what differs within rounding, in the order of the tables.
    notes : list of str
        A rewritten file's or a re-compressed file's values said to equal the rerun's.
    worded : dict
        Release -> table -> columns described as the releases before it worded them
        (:func:`earlier_wordings`; for :func:`earlier_wording_notes`).
    same_values : dict
        Cause -> tables whose values and metadata equal the rerun's while their file
        bytes differ from the recorded ones.
    """

    names: list
    differences: list
    rounding: list
    notes: list
    worded: dict
    same_values: dict


def rerun_table_findings(directory: Path, manifest: dict, new_manifest: dict, again: Path,
                         stored_tables: dict, earlier: list, environment) -> TableFindings:
    """Compare every table of a result folder with its rerun's, value by value
    (:func:`compare_tables`) and by its metadata (:func:`metadata_differences`).

    Parameters
    ----------
    directory : pathlib.Path
        The verified result folder.
    manifest, new_manifest : dict
        Its manifest and the rerun's.
    again : pathlib.Path
        The folder the rerun was written to.
    stored_tables : dict
        Table name -> the stored table as read (a table rewritten by another program
        carries ``attrs["rewritten"]``; :func:`fluxpart.verify_folder._read_stored`).
    earlier : list of Difference
        The differences found before (the folder's ``"hash"`` entries name the files
        changed after they were written).
    environment : sequence of str
        The environment differences (:func:`fluxpart.verify_folder._environment`): where
        there are some, they are named as the likely cause of file bytes that differ.

    Returns
    -------
    TableFindings
    """
    differences, rounding, notes = [], [], []
    same_values: dict = {}      # cause -> tables whose values and metadata equal the rerun's
    worded: dict = {}           # release -> table -> columns worded as before it
    names = sorted(set(manifest["tables"]) | set(new_manifest["tables"]))
    for name in names:
        if name not in new_manifest["tables"]:
            differences.append(Difference(name, "table", stored="present",
                                          recomputed="not produced"))
            continue
        if name not in manifest["tables"]:
            differences.append(Difference(name, "table", stored="absent",
                                          recomputed="produced"))
            continue
        if name not in stored_tables:
            continue
        recomputed = read_table(again / new_manifest["tables"][name]["file"])
        found = compare_tables(name, stored_tables[name], recomputed)
        rounding += [d for d in found if d.kind == "rounding"]
        differences += [d for d in found if d.kind != "rounding"]
        if stored_tables[name].attrs.get("rewritten"):
            notes.append(f"{name}: the rewritten file's values are "
                         + ("bit-identical to the rerun's: only the file and its metadata "
                            "changed" if not found else "not the rerun's where listed"))
            continue
        # metadata are compared beside any value difference and after an edit of the
        # file: an edited unit, or a description edited with a value, was reported only
        # as "changed after it was written" without what changed (review57)
        # a column added, dropped or of another type is named by compare_tables: its
        # schema entries would only repeat it
        described = [] if any(d.kind in ("columns", "dtype") for d in found) else \
            metadata_differences(directory / manifest["tables"][name]["file"],
                                 again / new_manifest["tables"][name]["file"])
        # a description as an earlier release worded it (schema.REWORDED_DESCRIPTIONS)
        # is a note: 0.34.0's folders were NOT reproduced over reworded words alone
        known, described = earlier_wordings(name, described)
        for release, column in known:
            worded.setdefault(release, {}).setdefault(name, []).append(column)
        values = ("" if not found else "values within rounding"
                  if all(d.kind == "rounding" for d in found) else "values differ too")
        differences += [Difference(name, "metadata", column=key, stored=old,
                                   recomputed=new, cause=values)
                        for key, old, new in described]
        if known:
            continue
        if not found and not described and _file_changed(name, [*earlier, *differences]):
            # a table re-compressed or rewritten by another Parquet writer with its
            # values and metadata: "changed after it was written" alone left an auditor
            # unable to tell whether a number had changed (round faults42)
            notes.append(f"{name}: the changed file's values and metadata are "
                         "bit-identical to the rerun's: only its bytes differ from the "
                         "recorded ones (rewritten with another compression or Parquet "
                         "writer?); the folder still fails, as its file is not the one "
                         "written")
        elif not found and (new_manifest["tables"][name]["sha256"]
                            != manifest["tables"][name].get("sha256")):
            if not described:
                cause = ("written before tables carried the copy of their metadata that "
                         "pandas.read_parquet reads (PANDAS_ATTRS)"
                         if _lacks_pandas_copy(directory / manifest["tables"][name]["file"])
                         else "library versions differ" if environment else
                         "the recorded library versions and platform match; a compression "
                         "library outside the record may differ")
                same_values.setdefault(cause, []).append(name)
    return TableFindings(names=names, differences=differences, rounding=rounding, notes=notes,
                         worded=worded, same_values=same_values)
