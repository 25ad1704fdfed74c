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
"""
from __future__ import annotations

import pandas as pd

from .store import _CARRIED

__all__ = ["changed_tables", "kept_tables"]

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
