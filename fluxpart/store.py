"""Writing and loading result tables: Parquet with units, written atomically.

Each table is one Parquet file. Its index becomes the first column; each column
carries its unit and description in the Arrow field metadata (keys ``unit`` and
``description``), and the file's schema metadata names the index column so that
:func:`read_table` restores the same DataFrame. Files are written to a temporary
name in the target folder and renamed into place, so a reader never sees a
half-written table. The bytes depend only on the table content and the library
versions: same content, same file.
"""

from __future__ import annotations

import hashlib
import json
import os
import tempfile
from pathlib import Path

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from .errors import InputFileError

__all__ = ["atomic_write_bytes", "column_units", "file_sha256", "read_table", "write_table"]

_SCHEMA_KEY = b"fluxpart"
# Result files are meant to be shared: readable by all, writable by the owner
# (mkstemp would leave them 0600).
_FILE_MODE = 0o644


def file_sha256(path) -> str:
    """Return the hexadecimal SHA-256 of a file's bytes."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    return digest.hexdigest()


def atomic_write_bytes(path, data: bytes) -> None:
    """Write `data` to `path` through a temporary file in the same folder, then rename."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, _FILE_MODE)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def _to_arrow(frame: pd.DataFrame, units: dict[str, tuple[str, str]], name: str) -> pa.Table:
    index_name = frame.index.name or "index"
    flat = frame.reset_index(names=index_name) if index_name not in frame.columns else frame
    table = pa.Table.from_pandas(flat, preserve_index=False)
    fields = []
    for field in table.schema:
        unit, description = units.get(field.name, ("", ""))
        fields.append(field.with_metadata({b"unit": unit.encode(), b"description":
                                           description.encode()}))
    meta = {"table": name, "index": index_name}
    schema = pa.schema(fields, metadata={_SCHEMA_KEY: json.dumps(meta, sort_keys=True).encode()})
    return pa.Table.from_arrays(table.columns, schema=schema)


def write_table(frame: pd.DataFrame, path, units: dict[str, tuple[str, str]], name: str) -> str:
    """Write `frame` to the Parquet file `path` atomically.

    Parameters
    ----------
    frame : pandas.DataFrame
        The table; its index is stored as the first column.
    path : path-like
        Target file.
    units : dict
        Column name -> (unit, description) stored in each field's metadata.
    name : str
        Table name recorded in the schema metadata.

    Returns
    -------
    str
        SHA-256 of the written file.
    """
    table = _to_arrow(frame, units, name)
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink, compression="zstd", use_dictionary=False,
                   write_statistics=True, store_schema=True)
    data = sink.getvalue().to_pybytes()
    atomic_write_bytes(path, data)
    return hashlib.sha256(data).hexdigest()


def read_table(path) -> pd.DataFrame:
    """Read a table written by :func:`write_table`, restoring its index.

    Raises
    ------
    InputFileError
        If the file does not exist or is not a fluxpart table.
    """
    path = Path(path)
    if not path.exists():
        raise InputFileError(f"result table {str(path)!r} does not exist")
    table = pq.read_table(path)
    meta = table.schema.metadata or {}
    if _SCHEMA_KEY not in meta:
        raise InputFileError(f"{str(path)!r} is not a table written by fluxpart "
                             "(no fluxpart schema metadata)")
    info = json.loads(meta[_SCHEMA_KEY])
    frame = table.to_pandas()
    return frame.set_index(info["index"])


def column_units(path) -> dict[str, str]:
    """Return column name -> unit from a table's Arrow field metadata."""
    schema = pq.read_schema(path)
    return {f.name: (f.metadata or {}).get(b"unit", b"").decode() for f in schema}
