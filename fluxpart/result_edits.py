"""A result's tables changed after the run, found before they are written (round mistakes37).

:class:`fluxpart.Result` hands out its tables as ordinary pandas DataFrames. A modeller
converting a sum in place (``result.annual["nee"] *= 44.01 / 12.011`` for g CO2), adding a
column or dropping rows, then calling :meth:`~fluxpart.Result.write`, wrote a result
folder whose ``nee`` is described as g C m-2 and holds g CO2, sealed by the manifest as
fluxpart's own: ``fluxpart verify`` then said "the folder matches its manifest" of numbers
fluxpart never computed (a result of ``process`` alone cannot be rerun). The tables as
computed are kept as copies that share their data (pandas copy-on-write: nothing is copied
until one side changes, pandas documentation, "Copy-on-Write" (m)); :func:`changed_tables`
compares them with the tables at the time of writing.

The copies lived in one Python object. A result rebuilt with ``dataclasses.replace(result,
annual=converted)`` (the way to change a frozen dataclass), or changed and then pickled
(returned from a worker process) or copied, got copies of the changed tables as its
"computed" ones and was written and sealed with NEE in g CO2 (round mistakes39). Now
:func:`as_computed` records, when :func:`fluxpart.process` makes the result, its kept
copies and a digest of the site, config, warnings and provenance the manifest writes;
``replace`` hands that record to the new result, pickling and copying carry it as digests
of every column (:func:`portable`), and :func:`changed_since` names what differs at writing.
"""
from __future__ import annotations

import hashlib
import json

import numpy as np
import pandas as pd

from .store import _CARRIED

__all__ = ["as_computed", "changed_since", "changed_tables", "changes", "kept_tables",
           "portable"]

#: The parts of a result written into ``manifest.json`` besides the tables.
_MANIFEST_PARTS = ("site", "config", "warnings", "provenance")

#: Whether a shallow copy of a DataFrame keeps its values when the original is changed
#: in place: pandas copy-on-write, the default from pandas 3.0 and an option of 2.x
#: (pandas documentation, "Copy-on-Write" (m)). Without it the kept copies are deep.
_LAZY_COPIES = (int(pd.__version__.split(".")[0]) >= 3
                or getattr(pd.options.mode, "copy_on_write", False) is True)


def kept_tables(tables: dict) -> dict:
    """Copies of a result's tables that later changes to the tables leave as they are.

    Parameters
    ----------
    tables : dict of str to pandas.DataFrame
        The result's tables by their file names (:meth:`fluxpart.Result.tables`).

    Returns
    -------
    dict of str to pandas.DataFrame
        Lazy copies under pandas copy-on-write (no data copied), deep copies otherwise.

    References
    ----------
    pandas documentation, "Copy-on-Write (CoW)": a shallow copy shares data until either
    object is modified (m).
    """
    return {name: table.copy(deep=not _LAZY_COPIES) for name, table in tables.items()}


def changed_tables(kept: dict, tables: dict) -> list:
    """What changed in each table since the run, one text per table.

    Parameters
    ----------
    kept : dict of str to pandas.DataFrame
        :func:`kept_tables` of the result as computed.
    tables : dict of str to pandas.DataFrame
        The result's tables now.

    Returns
    -------
    list of str
        E.g. ``"annual (column 'nee' changed; column 'nee_gco2' added)"``, or
        ``"parameters_mine (table added)"``; empty where the same tables are there and
        each equals its kept copy (values, dtypes, labels, index and its name, and the
        ``attrs`` written into the file).

    References
    ----------
    pandas documentation, ``DataFrame.equals`` (NaN in the same place counts as equal) (m).
    """
    # a table added to or removed from ``result.parameters`` (a dict, changeable in a
    # frozen Result) was written, or left out, under the seal unnoticed (round review42)
    found = [f"{name} (table added)" for name in tables if name not in kept]
    found += [f"{name} (table removed)" for name in kept if name not in tables]
    for name, table in tables.items():
        before = kept.get(name)
        if before is None or table.equals(before) and table.columns.equals(before.columns) \
                and table.index.equals(before.index) and _same_labels(table, before) \
                and not _changed_attrs(table, before):
            continue
        parts = [f"attrs {key!r} changed" for key in _changed_attrs(table, before)]
        added = [c for c in table.columns if c not in before.columns]
        removed = [c for c in before.columns if c not in table.columns]
        if list(table.index.names) != list(before.index.names):
            # Index.equals compares values only: a renamed index is written as a column
            # of that name with no unit (round review42)
            parts.append(f"index renamed {_names(before.index)} -> {_names(table.index)}")
        if list(table.columns.names) != list(before.columns.names):
            parts.append("column labels renamed")
        if table.index.dtype != before.index.dtype and table.index.equals(before.index):
            parts.append(f"index type {before.index.dtype} -> {table.index.dtype}")
        if not table.index.equals(before.index):
            parts.append(f"rows {len(before)} -> {len(table)}" if len(table) != len(before)
                         else "index changed")
        else:
            parts.extend(f"column {c!r} changed" for c in table.columns
                         if c in before.columns and not table[c].equals(before[c]))
        parts.extend(f"column {c!r} added" for c in added)
        parts.extend(f"column {c!r} removed" for c in removed)
        found.append(f"{name} ({'; '.join(parts[:4]) or 'changed'}"
                     f"{f'; {len(parts) - 4} more' if len(parts) > 4 else ''})")
    return found


def _changed_attrs(table: pd.DataFrame, before: pd.DataFrame) -> list:
    """The keys of ``attrs`` written into a table's file that differ from the kept copy's.

    :func:`fluxpart.store.write_table` carries ``site``, ``interval_minutes`` and
    ``time_convention`` from a frame's ``attrs`` into the file's metadata, which the
    manifest then seals (``result.timeseries.attrs["interval_minutes"] = 60`` was written
    as the record length of a half-hourly result, round review42); the other ``attrs``
    (units, descriptions) are not written, the schema's are. ``DataFrame.copy`` copies
    ``attrs`` deeply (pandas documentation, ``DataFrame.attrs`` (m)), so the kept copy holds
    them as computed.
    """
    return [key for key in _CARRIED if table.attrs.get(key) != before.attrs.get(key)]


def _same_labels(table: pd.DataFrame, before: pd.DataFrame) -> bool:
    """Whether the names of the index and column axis and the index's dtype are as kept
    (``DataFrame.equals`` and ``Index.equals`` compare values only, pandas
    documentation (m): ``Index([2021]).equals(Index([2021.0]))`` is true)."""
    return (list(table.index.names) == list(before.index.names)
            and list(table.columns.names) == list(before.columns.names)
            and table.index.dtype == before.index.dtype)


def _names(index: pd.Index) -> str:
    """The index's name(s) as a text: ``'year'``, or a list for several levels."""
    names = list(index.names)
    return repr(names[0]) if len(names) == 1 else repr(names)


def as_computed(result, kept: dict) -> dict:
    """The record of a result as made, for :func:`changed_since` at writing.

    Parameters
    ----------
    result : fluxpart.Result
        A result as :func:`fluxpart.process` (or :func:`fluxpart.load`) made it.
    kept : dict of str to pandas.DataFrame
        :func:`kept_tables` of its tables.

    Returns
    -------
    dict
        ``"tables"``: `kept` (no data copied); ``"site"``, ``"config"``, ``"warnings"``,
        ``"provenance"``: a SHA-256 (16 hex digits) of each as the manifest writes it.

    References
    ----------
    FIPS 180-4, SHA-256.
    """
    return {"tables": kept, **{part: _text_digest(_manifest_part(result, part))
                               for part in _MANIFEST_PARTS}}


def portable(record: dict) -> dict:
    """:func:`as_computed`'s record with its tables as digests, to pickle or copy.

    Each table becomes a SHA-256 (16 hex digits) per column, of the index and of the
    ``attrs`` written into the file, and its column labels: a few kilobytes in place of a
    second copy of the data.

    References
    ----------
    pandas documentation, ``pandas.util.hash_pandas_object`` (a stable 64-bit hash per
    value, for text; numbers and stamps are hashed by their bytes) (m); FIPS 180-4, SHA-256.
    """
    return {**record, "tables": {name: table if isinstance(table, dict) else _table_digest(table)
                                 for name, table in record["tables"].items()}}


def changes(result, *, manifest: bool = True, additions: bool = True) -> list:
    """What changed in a result since :func:`fluxpart.process` made it, one text each.

    Parameters
    ----------
    result : fluxpart.Result
        The result about to be written or exported.
    manifest : bool, optional
        Also the site, config, warnings and provenance (what ``manifest.json`` records;
        default); ``False``: the tables alone (what a Dataset labels with units).
    additions : bool, optional
        Also columns and tables added (default); ``False``: only what changed or went
        missing (a Dataset exports the columns it knows, so an added one is no change there).

    Returns
    -------
    list of str
        :func:`changed_tables` against the result's own kept copies, else
        :func:`changed_since` against the record handed on by ``dataclasses.replace``,
        pickling or copying; empty where the result is as made.
    """
    kept = getattr(result, "_as_computed", None)        # made by __post_init__, __setstate__
    found = [] if kept is None else changed_tables(kept, result.tables())
    record = getattr(result, "_computed", None)
    if not found and record is not None:
        # a result's own kept copies were compared just above: its manifest parts remain
        found = changed_since(record, result, tables=record["tables"] is not kept)
        if not manifest:
            found = [text for text in found if text.split(" (")[0] not in _MANIFEST_PARTS]
    if not additions:
        found = [text for text in map(_without_additions, found) if text]
    return found


def _without_additions(text: str) -> str:
    """``"annual (column 'nee' changed; column 'x' added)"`` less its additions: ``"annual
    (column 'nee' changed)"``; empty where only additions were found."""
    name, _, parts = text.partition(" (")
    kept = [part for part in parts.rstrip(")").split("; ") if not part.endswith(" added")]
    return f"{name} ({'; '.join(kept)})" if kept else ""


def changed_since(record: dict, result, *, tables: bool = True) -> list:
    """What differs from :func:`as_computed`'s record of the result as made, one text each.

    Parameters
    ----------
    record : dict
        :func:`as_computed` (or :func:`portable`) of the result as :func:`fluxpart.process`
        made it.
    result : fluxpart.Result
        The result about to be written.
    tables : bool, optional
        Compare the tables too (default); ``False``: the manifest parts alone.

    Returns
    -------
    list of str
        E.g. ``"annual (column 'nee' changed)"`` or ``"config (changed)"``; empty where
        the result is as made.
    """
    now = result.tables() if tables else {}
    if not tables:
        found = []
    elif not any(isinstance(table, dict) for table in record["tables"].values()):
        found = changed_tables(record["tables"], now)
    else:
        found = _changed_digests(portable(record)["tables"],
                                 {name: _table_digest(table) for name, table in now.items()})
    return found + [f"{part} (changed)" for part in _MANIFEST_PARTS
                    if _text_digest(_manifest_part(result, part)) != record[part]]


def _changed_digests(before_tables: dict, now_tables: dict) -> list:
    """:func:`changed_tables` for tables held as :func:`_table_digest` digests."""
    found = [f"{name} (table added)" for name in now_tables if name not in before_tables]
    found += [f"{name} (table removed)" for name in before_tables if name not in now_tables]
    for name, parts in now_tables.items():
        before = before_tables.get(name)
        if before is None or before == parts:
            continue
        texts = [f"{key} {'changed' if key in before else 'added'}" for key, value
                 in parts.items() if before.get(key) != value
                 and not (key == "column labels" and _only_added(before[key], value))]
        texts += [f"{key} removed" for key in before if key not in parts]
        found.append(f"{name} ({'; '.join(texts[:4])}"
                     f"{f'; {len(texts) - 4} more' if len(texts) > 4 else ''})")
    return found


def _only_added(before: str, now: str) -> bool:
    """Whether the labels `now` are those `before` in the same order with others added."""
    (labels, names), (now_labels, now_names) = json.loads(before), json.loads(now)
    return names == now_names and [label for label in now_labels if label in labels] == labels


def _table_digest(table: pd.DataFrame) -> dict:
    """``{"column 'nee'": digest, ..., "index": ..., "column labels": ..., "attrs": ...}``."""
    bare = table.copy(deep=False)       # without attrs: each column taken copies them deeply
    bare.attrs = {}
    out = {f"column {label!r}": _values_digest(bare.iloc[:, position])
           for position, label in enumerate(table.columns)}
    out["index"] = _values_digest(table.index) + _text_digest(
        [list(map(str, table.index.names)), str(table.index.dtype)])
    # the labels themselves (a few hundred bytes): an added column is named as such, not
    # also as "column labels changed"
    out["column labels"] = json.dumps([list(map(str, table.columns)),
                                       list(map(str, table.columns.names))])
    out["attrs"] = _text_digest({key: table.attrs.get(key) for key in _CARRIED})
    return out


def _values_digest(values) -> str:
    """SHA-256 (16 hex digits) of a column's or index's dtype and per-value hashes."""
    digest = hashlib.sha256(str(values.dtype).encode())
    if isinstance(values.dtype, np.dtype) and values.dtype.kind in "biufcmM":
        # numbers and stamps by their bytes (what the Parquet file holds), a tenth of
        # the time of pandas' per-value hash
        digest.update(np.ascontiguousarray(values.to_numpy()).tobytes())
        return digest.hexdigest()[:16]
    try:
        hashed = pd.util.hash_pandas_object(values, index=False).to_numpy()
        digest.update(hashed.tobytes())
    except TypeError:                                   # values pandas cannot hash (lists)
        digest.update(repr(list(values)).encode())
    return digest.hexdigest()[:16]


def _manifest_part(result, part: str):
    """The site, config, warnings or provenance as the manifest writes them."""
    value = getattr(result, part)
    return value.to_dict() if hasattr(value, "to_dict") else value


def _text_digest(value) -> str:
    """SHA-256 (16 hex digits) of `value` as canonical JSON (unknown types as text)."""
    text = json.dumps(value, sort_keys=True, default=str, ensure_ascii=True)
    return hashlib.sha256(text.encode()).hexdigest()[:16]
