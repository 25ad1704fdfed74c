"""Writing and loading result tables: Parquet with units, written atomically.

Each table is one Parquet file. Its index becomes the first column (an unnamed
default ``RangeIndex`` is not stored, nor one named ``index`` that ``reset_index``
left behind). Every column's unit and description are
stored twice, so that every reader finds them:

- in the Arrow field metadata (keys ``unit`` and ``description``), which pyarrow
  shows (``pandas.read_parquet`` drops it);
- in the file-level key-value metadata under the key ``fluxpart`` (JSON), which
  DuckDB (``parquet_kv_metadata``), Polars (``read_parquet_metadata``) and any
  Parquet reader show: ``{"table", "index", "columns": {name: {"unit",
  "description"}}}`` plus whatever the writer passes as ``metadata`` (a result
  folder passes the site, the record length and the time convention:
  :func:`fluxpart.schema.file_metadata`).

A third copy, under the file-level key ``PANDAS_ATTRS``, is the ``DataFrame.attrs``
that :func:`read_table` gives (``units``, ``descriptions``, ``table`` and the
writer's facts), as JSON: ``pandas.read_parquet`` (pandas 2.1 and later, pyarrow
engine) restores the frame's ``attrs`` from that key, so a plain pandas reader sees
the units too (:func:`reader_attrs`). Tables written before it lack the key; their
values and other metadata are unchanged (:func:`fluxpart.verify.metadata_differences`
does not count its absence).

Units are UDUNITS-2 strings (:mod:`fluxpart.units`). String columns that hold a few
labels (pandas ``category``: fill quality, rejection reasons) are stored
dictionary-encoded. :func:`read_table` restores the same DataFrame and puts the
units into ``DataFrame.attrs``.

Files are written to a temporary name in the target folder and renamed into place,
so a reader never sees a half-written table. The bytes depend only on the table
content and the library versions: same content, same file.
"""

from __future__ import annotations

import errno
import hashlib
import json
import os
from contextlib import nullcontext
from pathlib import Path

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from .errors import InputFileError, OutputError, ResourceShortage, read_fault_remedy
from .file_digest import sha256_of_file

__all__ = ["PANDAS_ATTRS_KEY", "arrow_table", "atomic_write_bytes", "column_units", "file_mode", "file_sha256",
           "folder_mode", "full_disk_remedy", "made_folder", "parquet_source", "read_table", "reader_attrs",
           "remove_stale", "set_mode", "shortage", "special_kind", "table_shape", "unreadable",
           "write_table"]

_SCHEMA_KEY = b"fluxpart"
#: The file-level key-value metadata key whose JSON ``pandas.read_parquet`` (pyarrow
#: engine, pandas >= 2.1) loads into ``DataFrame.attrs`` (pandas 2.1.0 release notes,
#: "DataFrame.to_parquet and read_parquet will now write and read attrs
#: respectively" (m); pandas/io/parquet.py reads the key ``PANDAS_ATTRS``).
PANDAS_ATTRS_KEY = b"PANDAS_ATTRS"
#: Facts of a frame's ``attrs`` that travel into the file metadata (set by the
#: pipeline and by :func:`read_table`; see :func:`fluxpart.schema.with_metadata`).
_CARRIED = ("site", "interval_minutes", "time_convention")


def _umask() -> int:
    """The process's file-mode creation mask, read without changing it where Linux allows."""
    try:
        with open("/proc/self/status", encoding="ascii") as status:
            for line in status:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)      # elsewhere: set and restore (no other thread writes yet)
    os.umask(mask)
    return mask


def require_owner_access() -> None:
    """Refuse to write where the umask takes the owner's own access to what is written.

    Every file and folder written takes its mode from the umask (:func:`file_mode`,
    :func:`folder_mode`). A umask with any of the owner's bits (``0o700``: ``umask 277``,
    ``umask 777``, a service's or a job script's mistake) gives the folder just made no
    write or search permission for its own maker, so every write into it failed with
    "Permission denied" on a folder that looked writable, the message naming free space
    or another place as the fix, and an unremovable ``d---------`` staging folder stayed
    behind; where it let the files be written (root), the owner could not read them back.

    Raises
    ------
    OutputError
        If ``umask & 0o700`` is not zero, naming the umask and a usual one.

    References
    ----------
    POSIX ``umask(2)`` and ``mkdir(2)``: the mode of a new file or folder is the mode
    asked for less the bits of the mask (m); ``022`` and ``077`` are the usual masks
    (common practice).
    """
    mask = _umask()
    if mask & 0o700:
        raise OutputError(
            f"the process's umask is {mask:04o}: it takes the owner's own read, write or "
            "search permission from every file and folder written, so nothing could be "
            "written or read back; set a usual umask (umask 022, or 077 for private files) "
            "and run again")


def file_mode() -> int:
    """Mode of a written result file: what ``open`` would give, 0o666 less the umask.

    ``tempfile.mkstemp`` creates private files (0o600), and a fixed 0o644 would ignore a
    user's umask both ways (group-writable for 0o002, private for 0o077).
    """
    return 0o666 & ~_umask()


def folder_mode() -> int:
    """Mode of a written result folder: what ``mkdir`` would give, 0o777 less the umask."""
    return 0o777 & ~_umask()


def set_mode(path, mode: int) -> None:
    """Give a file or folder just written `mode` (:func:`file_mode`, :func:`folder_mode`).

    A file system without POSIX permission bits refuses the change: FAT and exFAT (a USB
    stick, an SD card) mounted without ``quiet`` answer EPERM where the mode differs from
    their fixed mask, and some network shares ENOTSUP. The file then keeps the mode the
    file system gives it, as every file there does; before, the write failed
    ("Operation not permitted") with nothing written.
    """
    try:
        os.chmod(path, mode)
    except OSError as error:
        if error.errno not in _NO_MODE_BITS:
            raise


#: What chmod answers on a file system that keeps no POSIX permission bits.
_NO_MODE_BITS = {errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.ENOSYS}


_THREAD_REFUSED = ("Failed to launch worker thread", "Resource temporarily unavailable",
                   "Cannot allocate memory")


def shortage(path, error: Exception) -> ResourceShortage | None:
    """The error to raise where pyarrow could not read a file for want of memory or a thread.

    pyarrow reports a refused allocation as ``ArrowMemoryError`` ("malloc of size N
    failed") and a thread the system would not start (its stack is memory too) as an
    unknown error ("Failed to launch worker thread: Resource temporarily unavailable",
    EAGAIN of ``pthread_create(3)`` (m)). Both were reported as "not a readable Parquet
    file ... the file is damaged": under ``ulimit -v`` 400 MB `verify` said NOT reproduced,
    15 tables damaged, of a sound result folder.

    Parameters
    ----------
    path : path-like
        The file being read.
    error : Exception
        What pyarrow raised.

    Returns
    -------
    ResourceShortage or None
        One line naming the file, what the system refused and the likely limits; None
        where the error is of another kind (the file itself is at fault).

    References
    ----------
    pthread_create(3), EAGAIN: insufficient resources to create another thread, or a
    limit on threads (Linux man-pages) (m).
    """
    text = str(error)
    if not isinstance(error, MemoryError) and not any(part in text
                                                      for part in _THREAD_REFUSED):
        return None
    what = "a thread" if "thread" in text else "memory"
    detail = f" ({text})" if text else ""     # Python's own MemoryError has no text
    return ResourceShortage(
        f"the system refused {what} while reading {str(Path(path).name)!r} in "
        f"{str(Path(path).parent)!r}{detail}: a memory limit of this process (ulimit -v, "
        "a container's or a batch job's) or a limit on threads (ulimit -u); the file was "
        "not judged")


def damaged_table(path, error: Exception | str) -> InputFileError:
    """The error for a result table pyarrow cannot decode: cut short, a byte changed.

    pyarrow's text may span lines (a footer's Thrift that does not decode ends in a line
    break); it is given on one.
    """
    text = " ".join(str(error).split())
    return InputFileError(f"result table {str(path)!r} is not a readable Parquet file "
                          f"({text}); the file is damaged: rerun to rewrite the folder")


def unreadable_table(path, error: OSError) -> InputFileError:
    """The error for a result table that raised :class:`OSError` while read.

    pyarrow raises a plain :class:`OSError` without an ``errno`` for a footer that does
    not decode ("Couldn't deserialize thrift", a byte changed in the footer): that file is
    damaged, and was named so only with the fix of a permission fault ("make it and its
    folder readable by this user"), on two lines. A fault of the system (an ``errno``) keeps
    :func:`unreadable`.
    """
    if error.errno is None:
        return damaged_table(path, error)
    return unreadable(path, error)


def unreadable(path, error: OSError) -> InputFileError:
    """The error for a file that exists but cannot be read (permissions, an I/O error).

    Parameters
    ----------
    path : path-like
        The file (or folder) that could not be read.
    error : OSError
        What the operating system said.

    Returns
    -------
    InputFileError
        One line naming the file and the reason, to be raised by the caller.
    """
    where = error.filename if error.filename and str(error.filename) != str(path) else None
    place = f" (at {str(where)!r})" if where else ""
    return InputFileError(f"{str(path)!r} cannot be read{place}: {error.strerror or error}"
                          f"{read_fault_remedy(error)}")


#: How often a removal is begun again after a stop interrupted it (each stop a signal
#: the user sent: a bound, not a count ever met)
_REMOVAL_RESTARTS = 50


def remove_folder(path) -> None:
    """Remove the folder `path` (missing or not), begun again where a stop (a second
    Ctrl-C, SIGTERM sent twice) interrupts the removal.

    The first stop unwinds the writer, whose clean-up removes its staging folder; a second
    stop during that removal raised from inside ``shutil.rmtree`` and left the staging
    folder with part of its tables beside the result (round faults40: Ctrl-C twice during
    ``run`` and ``report``; an export's and a batch's staging alike). A signal mask cannot
    hold it back: a process-directed signal is taken by any thread that does not block it,
    and the interpreter then raises in the main thread all the same.

    Parameters
    ----------
    path : path-like
        The folder.

    References
    ----------
    Linux man-pages, signal(7) (a process-directed signal is delivered to any one thread
    that does not block it) and Python's ``signal`` module documentation (handlers run in
    the main thread) (m).
    """
    import shutil

    for _ in range(_REMOVAL_RESTARTS):
        try:
            shutil.rmtree(path, ignore_errors=True)
            return
        except BaseException:       # a repeated stop, already being obeyed
            continue


#: Names a writer draws for a folder of its own before it gives up (each name's eight
#: characters are random: a clash is another writer's folder of that very name).
_FOLDER_NAME_TRIES = 100


def made_folder(parent, prefix: str, suffix: str = "", made: list | None = None) -> Path:
    """Make a new private folder ``PREFIX`` + eight random characters + ``SUFFIX`` in
    `parent`, as :func:`tempfile.mkdtemp` does, its path put in `made` before it exists.

    A stop (Ctrl-C, SIGTERM, SIGHUP: an exception the command line's handler raises)
    that came after ``mkdtemp`` made the folder and before it returned left the folder
    with no name to remove it by: a report's staging folder stayed inside the result
    (one SIGHUP in three sent as the staging folder appeared, round faults49). Here the
    caller's `made` holds the path before the folder is made, so that its clean-up
    (``except BaseException``) removes it wherever the stop comes; a folder of that name
    made by another writer is not put there.

    Parameters
    ----------
    parent : path-like
        The folder to make it in.
    prefix, suffix : str
        Its name around the random part (eight lower-case hex digits, as
        ``secrets.token_hex(4)``: the characters of ``mkdtemp``'s names).
    made : list, optional
        The caller's list the new path is appended to before the folder is made.

    Returns
    -------
    pathlib.Path
        The folder (mode 700).

    Raises
    ------
    OSError
        If no folder can be made in `parent`.

    References
    ----------
    Python documentation, ``tempfile.mkdtemp`` and ``signal`` (a handler's exception is
    raised between two bytecode instructions of the main thread) (m).
    """
    import secrets

    made = [] if made is None else made
    for _ in range(_FOLDER_NAME_TRIES):
        path = Path(parent) / f"{prefix}{secrets.token_hex(4)}{suffix}"
        made.append(path)
        try:
            os.mkdir(path, 0o700)
        except FileExistsError:
            made.remove(path)       # another writer's: never the caller's to remove
            continue
        return path
    raise FileExistsError(errno.EEXIST, "no unused folder name", str(Path(parent) / prefix))


def remove_stale(folder, pattern, *, keep=None) -> list[str]:
    """Remove the entries of `folder` a killed writer left: names matching `pattern`.

    Called holding the lock under which every writer of these names works (the export's
    target, the batch's network tables): any such entry but the caller's own is then a
    leftover, whatever its modification time (judged by that time against the caller's
    start, a file system whose clock runs ahead kept leftovers for good and one whose
    clock runs behind swept the entry of a writer running now; round faults27).

    Parameters
    ----------
    folder : path-like
        The folder to tidy (only its own entries; symbolic links are left alone).
    pattern : re.Pattern
        Names of the leftovers (a writer's staging folders or temporary files).
    keep : path-like, optional
        The caller's own entry, never removed.

    Returns
    -------
    list of str
        The names removed; entries that cannot be removed are skipped.
    """
    import shutil

    removed = []
    try:
        entries = list(Path(folder).iterdir())
    except OSError:
        return removed
    for entry in entries:
        if not pattern.match(entry.name) or entry.is_symlink():
            continue
        if keep is not None and entry.name == Path(keep).name:
            continue
        try:
            if entry.is_dir():
                shutil.rmtree(entry)
            else:
                entry.unlink()
        except OSError:
            continue
        removed.append(entry.name)
    return removed


#: Free inodes below which a "No space left on device" is named as a lack of inodes: a
#: write needs a few dozen (one per table, temporary file and folder), and a file system
#: whose space, not inodes, ran out keeps thousands per gigabyte free (ext4 makes one
#: per 16 KiB by default, mke2fs.conf(5) (m)).
_FEW_INODES = 1000


def full_disk_remedy(path, fallback: str = "free space, or choose another place") -> str:
    """What to do after a write near `path` failed with ENOSPC.

    Parameters
    ----------
    path : str or path-like
        The folder written into (or any existing path on its file system).
    fallback : str, optional
        The remedy where space, not inodes, ran out.

    Returns
    -------
    str
        The remedy: `fallback`, or, where the file system has fewer than
        :data:`_FEW_INODES` free inodes, a sentence naming the inodes (``df -i``), the
        free space left and what to do.

    Notes
    -----
    ENOSPC is returned both when a file system's blocks and when its inodes (file
    entries) are used up (open(2), mkdir(2) (m)): a small volume or tmpfs holding many
    small files (``nr_inodes``), or a logger's card formatted for few files, refuses new
    files with space to spare. "Free space" then points the user at ``df -h``, which
    shows room, and the write fails again. The count is read after the failed write was
    cleaned up, so it holds the inodes freed by the clean-up (a few dozen) too.

    References
    ----------
    statvfs(3): ``f_favail``, free inodes for unprivileged users; ``f_files`` 0 where
    a file system has no fixed number (btrfs) (m).
    """
    try:
        info = os.statvfs(_existing(Path(path)))
    except (OSError, ValueError):
        return fallback
    if info.f_files == 0 or info.f_favail >= _FEW_INODES:
        return fallback
    free = info.f_bavail * info.f_frsize / 1e6
    return (f"the file system has only {info.f_favail} free inodes (file entries, `df -i`) "
            f"of {info.f_files} though {free:.1f} MB are free: remove files there (or "
            "make a file system with more inodes), or choose another place")


def special_kind(path) -> str:
    """``"a named pipe"``, ``"a device"`` or ``"a socket"`` for such a `path`, else ``""``.

    Parameters
    ----------
    path : str or path-like
        Any path; a symbolic link is followed (``/dev/stdout`` is the pipe or terminal
        it leads to).

    Returns
    -------
    str
        The kind, with its article, or ``""`` for a plain file, a folder or no entry.

    Notes
    -----
    Opening a named pipe for reading blocks until a writer opens it (fifo(7) (m)): a
    command that reads the first bytes of what it was given (to tell an archive, or a
    NetCDF file it may replace) waited without end on a pipe nobody writes. Ask this
    first, without opening.

    References
    ----------
    fifo(7) and inode(7): ``S_ISFIFO``, ``S_ISCHR``, ``S_ISBLK`` and ``S_ISSOCK`` of
    ``stat(2)``'s ``st_mode`` (m).
    """
    from ._validate import mode_kind

    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return ""
    return mode_kind(mode)


def _existing(path: Path) -> Path:
    """`path` or its nearest existing parent."""
    while not path.exists() and path.parent != path:
        path = path.parent
    return path


def file_sha256(path) -> str:
    """Return the hexadecimal SHA-256 of a file's bytes.

    Raises
    ------
    InputFileError
        If the file cannot be opened or read (no permission, an I/O error); the
        message names it.
    """
    try:
        return sha256_of_file(path)
    except OSError as error:
        raise unreadable(path, error) from None


def atomic_write_bytes(path, data: bytes) -> None:
    """Write `data` to `path` through a temporary file in the same folder, then rename."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    made: list = []
    try:
        handle, temporary = _made_file(path.parent, f".{path.name}.", ".tmp", made)
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        set_mode(temporary, file_mode())
        os.replace(temporary, path)
    except BaseException:
        for temporary in made:
            Path(temporary).unlink(missing_ok=True)
        raise


def _made_file(parent: Path, prefix: str, suffix: str, made: list) -> tuple[int, str]:
    """(descriptor, path) of a new private file ``PREFIX`` + eight random characters +
    ``SUFFIX`` in `parent`, as :func:`tempfile.mkstemp` makes one, its path put in `made`
    before it exists: a stop raised inside ``mkstemp`` after the file was made left it
    with no name to remove it by (:func:`made_folder`, round faults49)."""
    import secrets

    for _ in range(_FOLDER_NAME_TRIES):
        temporary = os.path.join(parent, f"{prefix}{secrets.token_hex(4)}{suffix}")
        made.append(temporary)
        try:
            return os.open(temporary, os.O_RDWR | os.O_CREAT | os.O_EXCL
                           | getattr(os, "O_CLOEXEC", 0), 0o600), temporary
        except FileExistsError:
            made.remove(temporary)  # another writer's: never the caller's to remove
    raise FileExistsError(errno.EEXIST, "no unused file name", os.path.join(parent, prefix))


def _stored_index(frame: pd.DataFrame) -> str | None:
    """Name of the index column to store, or None for an unnamed default RangeIndex."""
    index = frame.index
    if index.name in (None, "index") and isinstance(index, pd.RangeIndex) \
            and index.start == 0 and index.step == 1:
        return None     # a row counter (also one left behind by reset_index) says nothing
    return index.name or "index"


def _to_arrow(frame: pd.DataFrame, units: dict[str, tuple[str, str]], name: str,
              metadata: dict | None) -> pa.Table:
    index_name = _stored_index(frame)
    # a shallow copy without the attrs (they go into the file metadata below; left on,
    # pandas would deep-copy them for every column taken out of the frame)
    plain = frame.copy(deep=False)
    plain.attrs = {}
    # column by column, as pa.Table.from_pandas converts them (the same Arrow types and
    # values), without its pandas metadata, which the schema below drops, and its threads;
    # the index first where it is stored (as reset_index would make it a column)
    labels = [str(label) for label in plain.columns]
    arrays = [pa.array(values, from_pandas=True) for _, values in plain.items()]
    if index_name is not None and index_name not in plain.columns:
        labels.insert(0, index_name)
        arrays.insert(0, pa.array(plain.index.to_series(), from_pandas=True))
    fields, columns = [], {}
    for label, array in zip(labels, arrays, strict=True):
        field = pa.field(label, array.type)
        unit, description = units.get(field.name, ("", ""))
        columns[field.name] = {"unit": unit, "description": description}
        fields.append(field.with_metadata({b"unit": unit.encode(), b"description":
                                           description.encode()}))
    carried = {key: frame.attrs[key] for key in _CARRIED if key in frame.attrs}
    meta = {**carried, **(metadata or {}), "table": name, "index": index_name,
            "columns": columns}
    text = json.dumps(meta, sort_keys=True, ensure_ascii=False, allow_nan=False)
    attrs = json.dumps(reader_attrs(meta), sort_keys=True, ensure_ascii=False,
                       allow_nan=False)
    schema = pa.schema(fields, metadata={_SCHEMA_KEY: text.encode("utf-8"),
                                         PANDAS_ATTRS_KEY: attrs.encode("utf-8")})
    return pa.Table.from_arrays(arrays, schema=schema)


def reader_attrs(info: dict) -> dict:
    """The ``DataFrame.attrs`` of a table from its ``fluxpart`` file metadata.

    Parameters
    ----------
    info : dict
        The parsed ``fluxpart`` key-value metadata of a table: ``columns`` (column ->
        ``{"unit", "description"}``), ``index`` and the writer's facts (``table``,
        ``site``, ``interval_minutes``, ``time_convention``).

    Returns
    -------
    dict
        ``units`` and ``descriptions`` (column -> text, the stored index column
        included; units are UDUNITS-2 strings, "" for none) and every other key of
        `info` but ``columns`` and ``index``. :func:`read_table` puts this into the
        frame's ``attrs``, and :func:`write_table` stores it under
        :data:`PANDAS_ATTRS_KEY`, from which ``pandas.read_parquet`` restores the same
        ``attrs``.

    References
    ----------
    pandas 2.1.0 release notes: ``read_parquet`` reads ``DataFrame.attrs`` from the
    file metadata key ``PANDAS_ATTRS`` (m).
    """
    columns = info.get("columns") or {}
    attrs = {key: value for key, value in info.items() if key not in ("columns", "index")}
    attrs["units"] = {column: entry["unit"] for column, entry in columns.items()}
    attrs["descriptions"] = {column: entry["description"] for column, entry in columns.items()}
    return attrs


def write_table(frame: pd.DataFrame, path, units: dict[str, tuple[str, str]], name: str, *,
                metadata: dict | None = None) -> str:
    """Write `frame` to the Parquet file `path` atomically.

    Parameters
    ----------
    frame : pandas.DataFrame
        The table; its index is stored as the first column (not an unnamed
        default RangeIndex).
    path : path-like
        Target file.
    units : dict
        Column name -> (unit, description), stored in each field's metadata and in
        the file's ``fluxpart`` key-value metadata. Units are UDUNITS-2 strings.
    name : str
        Table name recorded in the file metadata.
    metadata : dict, optional
        More JSON-compatible facts for the file's ``fluxpart`` key-value metadata,
        e.g. :func:`fluxpart.schema.file_metadata` (site, record length, time
        convention); where absent, the same keys are taken from ``frame.attrs``.
        The keys ``table``, ``index`` and ``columns`` are set here.

    Returns
    -------
    str
        SHA-256 of the written file.
    """
    table = _to_arrow(frame, units, name, metadata)
    dictionary = [f.name for f in table.schema if pa.types.is_dictionary(f.type)]
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink, compression="zstd", use_dictionary=dictionary or False,
                   write_statistics=True, store_schema=True)
    data = sink.getvalue().to_pybytes()
    atomic_write_bytes(path, data)
    return hashlib.sha256(data).hexdigest()


def parquet_source(path):
    """`path` as pyarrow's readers take it: the path's text, or, where the name holds bytes
    that are not UTF-8, the open file (a context manager either way).

    pyarrow encodes a path given as text in UTF-8, so a result folder whose path holds a
    name from another code page (which Python carries as lone surrogates) had every table
    "not a readable Parquet file ... the file is damaged", and a genuine result failed
    ``verify`` with 15 differences; an open file is read by its descriptor.
    """
    text = os.fspath(path)
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return open(text, "rb")
    return nullcontext(text)


def arrow_table(path, columns=None) -> pa.Table:
    """The Parquet file `path` (its `columns`, default all) decoded on the calling thread.

    The one reader of a Parquet file's rows in fluxpart (:func:`read_table`, the network
    tables and the same-records check of :mod:`fluxpart.batch`, a table rewritten by
    another program in :mod:`fluxpart.verify`). Python reads the file's bytes and pyarrow
    decodes them from memory with ``use_threads=False``: pyarrow's own reading of a path,
    an open file or a memory map starts a thread of its I/O pool for the first file read
    (up to 8 in all), a buffer none (measured, pyarrow 26.0). Under a memory limit
    (``ulimit -v``) a thread the system refuses hung a read for good or ended the process
    before Python could say why (faults32); a thread never started cannot be refused. A
    refused allocation on this thread is a :class:`MemoryError` Python can name.

    Parameters
    ----------
    path : path-like
        The Parquet file (a name that is not UTF-8 is read as Python reads any name).
    columns : list of str, optional
        The columns to decode, in the file's order; default all.

    Returns
    -------
    pyarrow.Table
        The file's rows with its schema and key-value metadata.

    Raises
    ------
    ResourceShortage
        Where the system refused memory (or a thread) while reading the file.
    InputFileError
        Where the file cannot be read (permissions, an I/O error), is no readable
        Parquet file (cut short, a byte changed) or no file (a folder, a named pipe, a
        device: named without opening it, :func:`special_kind`).

    Notes
    -----
    The whole file is held while decoding: its compressed size on top of the table
    (a ten-year half-hourly result's largest table, 18 MB, adds ~4 % to the peak of
    ``verify``; see DEVELOPERS.md, faults33).

    References
    ----------
    Apache Arrow documentation, ``pyarrow.BufferReader``, ``pyarrow.parquet.ParquetFile``
    and ``ParquetFile.read(use_threads=False)`` (m). pthread_create(3), EAGAIN
    (Linux man-pages) (m).
    """
    kind = special_kind(path) or ("a folder" if os.path.isdir(path) else "")
    if kind:            # a named pipe blocks the open for good, a device reads on and on
        raise InputFileError(f"result table {str(path)!r} is {kind}, not a Parquet file: "
                             "rerun to rewrite the folder")
    try:
        with open(path, "rb") as handle:
            problem = _frame_problem(handle)
            data = b"" if problem else handle.read()
    except MemoryError as error:
        raise shortage(path, error) from None
    except OSError as error:
        if error.errno in (errno.ENOENT, errno.ELOOP):
            # no file to make readable: gone since it was listed, a symbolic link to
            # nothing or to itself (named "cannot be read ... make it readable" before
            # round review42)
            what = ("leads through a symbolic link back to itself"
                    if error.errno == errno.ELOOP else
                    "is a symbolic link to nothing" if os.path.islink(path)
                    else "does not exist")
            raise InputFileError(f"result table {str(path)!r} {what}: rerun to rewrite the "
                                 "folder") from None
        raise shortage(path, error) or unreadable_table(path, error) from None
    if problem:
        raise damaged_table(path, problem)
    try:
        with pq.ParquetFile(pa.BufferReader(data)) as opened:
            return opened.read(columns=columns, use_threads=False)
    except (pa.ArrowException, ValueError, OSError, MemoryError) as error:
        raise shortage(path, error) or damaged_table(path, error) from None


#: The marks a Parquet file begins and ends with, and the bytes around its footer: the
#: footer's length (4 bytes, little-endian) and the closing mark.
_PARQUET_MARK = b"PAR1"
_PARQUET_TAIL = 8


def _frame_problem(handle) -> str:
    """What shows an open file is no whole Parquet file, from its first and last bytes.

    Checked before the whole file is read into memory (:func:`arrow_table`): a table
    replaced by a large file of something else (a sparse file, a disk image, a log) was
    read whole before pyarrow found no footer, 3 GB of memory and 15 s for a 3 GB file,
    and under a memory limit it was named as a shortage of memory, not as damaged
    (faults34). A file that passes may still be damaged inside; pyarrow judges that.

    Parameters
    ----------
    handle : binary file
        Open for reading; left at its start.

    Returns
    -------
    str
        The problem in words; empty when the file is framed as Parquet.

    References
    ----------
    Apache Parquet, "File Format" (parquet.apache.org/docs/file-format): the 4-byte magic
    number ``PAR1`` at the start and the end, the footer's length in 4 bytes
    little-endian just before the closing one (m).
    """
    size = os.fstat(handle.fileno()).st_size
    least = len(_PARQUET_MARK) + _PARQUET_TAIL
    if size < least:
        return f"{size} bytes, fewer than the {least} of the smallest Parquet frame"
    head = handle.read(len(_PARQUET_MARK))
    handle.seek(size - _PARQUET_TAIL)
    tail = handle.read(_PARQUET_TAIL)
    handle.seek(0)
    missing = [end for end, mark in (("start", head), ("end", tail[4:]))
               if mark != _PARQUET_MARK]
    if missing:
        return (f"{size} bytes without Parquet's mark {_PARQUET_MARK.decode()} at its "
                f"{' and its '.join(missing)}"
                + (" (cut short?)" if missing == ["end"] else ""))
    footer = int.from_bytes(tail[:4], "little")
    if footer > size - least:
        return f"its footer is said to take {footer} bytes of a file of {size}"
    return ""


def read_table(path) -> pd.DataFrame:
    """Read a table written by :func:`write_table`, restoring its index.

    The returned frame's ``attrs`` hold ``units`` and ``descriptions`` (column ->
    text, index column included) and the other facts of the file's ``fluxpart``
    metadata (``table``, and ``site``, ``interval_minutes``, ``time_convention``
    where the writer stored them).

    Raises
    ------
    InputFileError
        If the file does not exist or is not a fluxpart table.
    """
    path = Path(path)
    if not path.exists():
        raise InputFileError(f"result table {str(path)!r} does not exist")
    # one file, on this thread, and so the conversion below (:func:`arrow_table`): a
    # refused allocation (std::bad_alloc) in one of pyarrow's worker threads ends the
    # process (std::terminate, exit 134, no error line: `verify` under ulimit -v 400, 475
    # and 525 MB, faults31), in the calling thread pyarrow raises it as MemoryError
    table = arrow_table(path)
    meta = table.schema.metadata or {}
    if _SCHEMA_KEY not in meta:
        raise InputFileError(f"{str(path)!r} is not a table written by fluxpart "
                             "(no fluxpart schema metadata)")
    try:
        info = json.loads(meta[_SCHEMA_KEY])
    except ValueError:
        raise InputFileError(f"{str(path)!r}: its fluxpart schema metadata is not valid "
                             "JSON; the file is damaged: rerun to rewrite the folder") from None
    try:
        frame = table.to_pandas(use_threads=False)
    except (pa.ArrowException, MemoryError) as error:
        raise shortage(path, error) or damaged_table(path, error) from None
    if info.get("index") is not None:
        frame = frame.set_index(info["index"])
    columns = info.get("columns") or {
        f.name: {"unit": (f.metadata or {}).get(b"unit", b"").decode(),
                 "description": (f.metadata or {}).get(b"description", b"").decode()}
        for f in table.schema}
    frame.attrs.update(reader_attrs({**info, "columns": columns}))
    return frame


def table_shape(path) -> tuple[int, list[str]]:
    """Rows and column names of a Parquet file, from its footer only (no data read).

    Parameters
    ----------
    path : path-like
        The Parquet file.

    Returns
    -------
    rows : int
        Number of rows.
    columns : list of str
        Column names in file order (the stored index first, where it is stored).

    Raises
    ------
    InputFileError
        If the file cannot be read or is not a readable Parquet file; the message
        names it.
    """
    try:
        with parquet_source(path) as source:
            metadata = pq.read_metadata(source)
    except OSError as error:
        raise shortage(path, error) or unreadable_table(path, error) from None
    except (pa.ArrowException, ValueError, MemoryError) as error:
        raise shortage(path, error) or damaged_table(path, error) from None
    return metadata.num_rows, list(metadata.schema.to_arrow_schema().names)


def column_units(path) -> dict[str, str]:
    """Return column name -> unit from a table's Arrow field metadata."""
    with parquet_source(path) as source:
        schema = pq.read_schema(source)
    return {f.name: (f.metadata or {}).get(b"unit", b"").decode() for f in schema}
