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

import re
from pathlib import Path

from .store import file_sha256

__all__ = ["copy_of_table", "copy_tool_temporary", "renamed_table"]


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


#: rsync's name for a file it is receiving: the file's name after a dot, a dot and six
#: letters or digits (``.annual.parquet.Xy12Ab``; rsync(1), its temporary files without
#: --inplace (m)); left behind where the copy was stopped.
_RECEIVING = re.compile(r"\.(?P<file>.+)\.[A-Za-z0-9]{6}")


def copy_tool_temporary(name: str, files) -> str | None:
    """The listed file whose copy a copy tool was receiving under `name` when it stopped
    (rsync's ``.FILE.XXXXXX``), or None; the name alone decides, no file is read.

    Parameters
    ----------
    name : str
        An entry of a result folder that its manifest does not list.
    files : iterable of str
        The file names a result folder holds (its tables', manifest.json, run-log.json).

    Returns
    -------
    str or None
        The file of `files` that `name` is rsync's temporary copy of
        (``.annual.parquet.Xy12Ab`` → ``annual.parquet``); None where `name` is not of
        that form or names no file of `files`.

    References
    ----------
    rsync(1) manual: a file is received into a temporary file in the destination folder
    and renamed over the destination's name when complete (m).
    """
    match = _RECEIVING.fullmatch(name)
    if match is None:
        return None
    return match["file"] if match["file"] in set(files) else None
