"""A result table kept under another name: renamed away, or copied beside itself.

A user about to edit a table keeps a backup (``annual.parquet.bak``, ``annual.parquet~``,
``annual.parquet.orig``) and sometimes never puts it back, or leaves the backup beside
the table. ``verify`` named the first "listed in the manifest but missing" and the second
"not listed in the manifest", with nothing that said the bytes were all there. These
functions find such a file by its SHA-256, so the folder check can say what to rename or
delete (round faults46). The verdict does not change: the folder must hold exactly the
files its manifest lists, under their names.
"""

from __future__ import annotations

from pathlib import Path

from .store import file_sha256

__all__ = ["copy_of_table", "renamed_table"]


def _same_bytes(path: Path, sha256) -> bool:
    """Whether `path` is a plain file (no link) whose SHA-256 is `sha256` (hex)."""
    try:
        return path.is_file() and not path.is_symlink() and file_sha256(path) == sha256
    except OSError:
        return False


def renamed_table(directory: Path, file: str, sha256) -> str | None:
    """The entry of `directory` named `file` plus a suffix (``annual.parquet.bak``,
    ``annual.parquet~``) that holds the table's recorded bytes, or None.

    Parameters
    ----------
    directory : pathlib.Path
        A result folder.
    file : str
        A table's file name as the manifest lists it.
    sha256 : str
        The SHA-256 the manifest records for it (hex).

    Returns
    -------
    str or None
        The first such name in sorted order.

    References
    ----------
    FIPS 180-4, Secure Hash Standard (SHA-256): equal digests, equal bytes (m).
    """
    try:
        names = sorted(entry.name for entry in directory.iterdir()
                       if entry.name.startswith(file) and entry.name != file)
    except OSError:
        return None
    return next((name for name in names if _same_bytes(directory / name, sha256)), None)


def copy_of_table(path: Path, tables: dict) -> str | None:
    """The file name of the table whose recorded bytes `path` holds (a backup copy beside
    it), or None; only a name beginning with that table's is looked at, so no other file
    of the folder is read.

    Parameters
    ----------
    path : pathlib.Path
        An entry of a result folder that its manifest does not list.
    tables : dict
        The manifest's ``tables``: ``{name: {"file": ..., "sha256": ...}}``.

    References
    ----------
    FIPS 180-4, Secure Hash Standard (SHA-256) (m).
    """
    for entry in tables.values():
        file = entry.get("file") if isinstance(entry, dict) else None
        if isinstance(file, str) and file and path.name.startswith(file) \
                and path.name != file and _same_bytes(path, entry.get("sha256")):
            return file
    return None
