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
        E.g. ``"annual (column 'nee' changed; column 'nee_gco2' added)"``; empty where
        every table equals its kept copy (values, dtypes, labels and index).

    References
    ----------
    pandas documentation, ``DataFrame.equals`` (NaN in the same place counts as equal) (m).
    """
    found = []
    for name, table in tables.items():
        before = kept.get(name)
        if before is None or table.equals(before) and table.columns.equals(before.columns) \
                and table.index.equals(before.index):
            continue
        parts = []
        added = [c for c in table.columns if c not in before.columns]
        removed = [c for c in before.columns if c not in table.columns]
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
