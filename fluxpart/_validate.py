"""Small input checks shared by the modules (private): arrays, time axis, TOML files."""

from __future__ import annotations

import codecs
import errno
import os
import re
import stat
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import (
    ConfigError,
    FluxpartError,
    InputFileError,
    LengthMismatchError,
    MissingColumnError,
    TimestampError,
)


def as_bool(values, name: str) -> np.ndarray:
    """Return `values` as a new boolean array; 0/1 numbers are accepted, missing values not."""
    array = np.asarray(values)
    if array.dtype != bool:
        if array.dtype.kind not in "iuf" or np.any(~np.isin(array, (0, 1))):
            raise FluxpartError(f"{name} must be boolean (True/False for every record, no "
                                "missing values)")
        array = array.astype(bool)
    return array.copy()


def unique_columns(columns) -> None:
    """Refuse column labels given twice, naming them.

    A frame built by ``pd.concat([frame, other], axis=1)`` or by joining two loggers'
    tables can carry one label twice (two ``nee`` columns). Selecting it returns a table
    rather than the one column every stage expects, and which of the two is meant is
    for the caller to say: the first is no more right than the second (common
    practice: pandas leaves such labels ambiguous, ``frame["nee"]`` returns both).

    Raises
    ------
    MissingColumnError
        If a label occurs more than once.
    """
    labels = pd.Index(columns)
    twice = list(dict.fromkeys(labels[labels.duplicated()]))
    if twice:
        raise MissingColumnError(
            f"column(s) {', '.join(repr(str(label)) for label in twice)} occur more than once "
            "in the frame; keep one column per variable (e.g. frame.loc[:, "
            "~frame.columns.duplicated()] keeps the first) or rename the other")


def datetime_index(index) -> pd.DatetimeIndex:
    """Return `index` if it is a DatetimeIndex, else raise a TimestampError."""
    if not isinstance(index, pd.DatetimeIndex):
        raise TimestampError(f"the time axis must be a pandas DatetimeIndex of interval starts; "
                             f"found {type(index).__name__}")
    return index


def float_copy(values, name: str) -> np.ndarray:
    """Return `values` as a new float64 array, nullable pandas values (``pd.NA``) as NaN.

    Raises
    ------
    FluxpartError
        If the values are not numbers (the message names `name`).
    """
    try:
        if isinstance(values, (pd.Series, pd.Index)):
            return values.to_numpy(dtype=np.float64, na_value=np.nan, copy=True)
        return np.array(values, dtype=np.float64)
    except (TypeError, ValueError):
        raise FluxpartError(f"{name}: expected numbers (NaN where missing)") from None


def as_float(values, name: str, length: int) -> np.ndarray:
    """Return `values` as a new float64 vector of one value per record.

    Nullable pandas values (``pd.NA``) become NaN.

    Raises
    ------
    FluxpartError
        If the values are not numbers.
    LengthMismatchError
        If they are not one-dimensional with `length` values.
    """
    array = float_copy(values, name)
    if array.shape != (length,):
        raise LengthMismatchError(f"{name}: expected one value per record ({length}), found "
                                  f"shape {array.shape}")
    return array


def read_site_config_toml(path) -> dict:
    """Parse the site config `path` (:func:`read_toml`), refusing a network file.

    Raises
    ------
    ConfigError
        If the file holds a ``[batch]`` table: a network file given to ``run`` or
        ``check`` was refused as "top-level table [batch] is unknown", or, by ``run``,
        for the output folder its default ``--out`` named (review43).
    """
    document = read_toml(path, "site config")
    if isinstance(document.get("batch"), dict):
        raise ConfigError(f"{str(path)!r} is a network file (its [batch] table lists site "
                          "configs), not a site config: process it with fluxpart batch "
                          f"{str(path)}, or give one of the site configs it lists")
    return document


def _relative_to_gone_folder(path) -> str:
    """What to add where a relative `path` was looked up in a current folder that no
    longer exists (deleted or replaced while the shell was in it), else ``""``.

    Every relative path then "does not exist", though the file may well be where the
    user sees it; getcwd(3) fails with ENOENT (m) (faults38)."""
    if Path(path).is_absolute():
        return ""
    try:
        os.getcwd()
    except FileNotFoundError:
        return (" here: the current folder no longer exists (deleted or replaced while this "
                "shell was in it); cd to an existing folder, or give an absolute path")
    return ""


def read_toml(path, what: str) -> dict:
    """Parse the TOML file `path`; `what` names it in errors (e.g. ``"site config"``).

    Raises
    ------
    InputFileError
        If the file does not exist or cannot be read as UTF-8 text.
    ConfigError
        If it is not valid TOML.
    """
    path = Path(path)
    if path.is_dir():
        # "cannot be read: Is a directory" left the fix to the reader (review43)
        found = sorted(p.name for p in path.glob("*.toml"))[:5]
        held = (f"; it holds {', '.join(repr(name) for name in found)}" if found
                else "; it holds no .toml file")
        raise InputFileError(f"{what} {str(path)!r} is a folder: give the TOML file "
                             f"itself{held}")
    if path.exists() and not path.is_file():
        # a device or a named pipe: /dev/zero was read until memory ran out, a pipe
        # without a writer waited for ever (review round thirteen)
        raise InputFileError(f"{what} {str(path)!r} is not a regular file (a device or a "
                             "named pipe): give the TOML file itself")
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise InputFileError(f"{what} {str(path)!r} does not exist"
                             f"{_relative_to_gone_folder(path)}") from None
    except OSError as error:
        raise InputFileError(f"{what} {str(path)!r} cannot be read: "
                             f"{error.strerror or error}") from None
    if not data:
        # a file cut to nothing (a copy or sync that failed, an editor's save interrupted)
        # was "has no [site] table", which sent the reader looking for a typo (faults46)
        raise InputFileError(f"{what} {str(path)!r} is empty (0 bytes: a copy or sync cut "
                             "short, or a save that did not finish?); restore it from where "
                             "it came")
    try:
        # TOML is UTF-8; a byte-order mark (as some Windows editors write) is dropped
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        line = data[:error.start].count(b"\n") + 1
        raise InputFileError(f"{what} {str(path)!r} is not UTF-8 text (byte "
                             f"0x{data[error.start]:02x} on line {line}); TOML files are "
                             "UTF-8: save it as UTF-8 in your editor") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        hint = ""
        if str(error).startswith(("Cannot overwrite a value", "Cannot declare")):
            # the parser names the line, not the key: quote the line, so that the setting
            # given twice is named (review round thirteen)
            found = re.search(r"at line (\d+)", str(error))
            lines = text.split("\n")
            number = int(found[1]) if found else 0
            quoted = (f" ({lines[number - 1].strip()[:80]!r})"
                      if 0 < number <= len(lines) else "")
            hint = f"; a setting or [table] is given twice there{quoted}: keep one"
        elif path.suffix.lower() in (".csv", ".dat", ".txt", ".tsv"):
            hint = (f"; {path.name} looks like a data file: give the site config (.toml), "
                    "whose [input] path names the data")
        raise ConfigError(f"{what} {str(path)!r} is not valid TOML: {error}{hint}") from None


#: Leading bytes of file formats users give by mistake as a text table.
_BINARY_SIGNATURES = (
    (b"\x1f\x8b", "gzip-compressed", "decompress it (e.g. gunzip)"),
    (b"PK\x03\x04", "a zip archive (an .xlsx or .ods workbook is one)",
     "unpack it, or save the sheet as CSV"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1", "an old Excel (.xls) workbook", "save the sheet as CSV"),
    (b"\x89HDF\r\n\x1a\n", "an HDF5 or NetCDF-4 file", "export it as CSV"),
    (b"CDF\x01", "a NetCDF file", "export it as CSV"),
    (b"CDF\x02", "a NetCDF file", "export it as CSV"),
    (b"\xfd7zXZ\x00", "xz-compressed", "decompress it (e.g. unxz)"),
    # compressors the standard library cannot open (layouts25: read as text, their bytes
    # were refused as "not utf-8 text" with the hint to set [input] encoding): Zstandard
    # (frame magic 0xFD2FB528 little-endian, RFC 8878 section 3.1.1), LZ4 (frame magic
    # 0x184D2204 little-endian, LZ4 frame format description (m)), lzip ("LZIP", lzip
    # manual (m)) and Unix compress (.Z, 1F 9D (m))
    (b"\x28\xb5\x2f\xfd", "Zstandard-compressed", "decompress it (e.g. zstd -d)"),
    (b"\x04\x22\x4d\x18", "LZ4-compressed", "decompress it (e.g. lz4 -d)"),
    (b"LZIP", "lzip-compressed", "decompress it (e.g. lzip -d)"),
    (b"\x1f\x9d", "compressed by Unix compress (.Z)", "decompress it (e.g. uncompress)"),
    # files of data tools (layouts42: a Feather file was refused as "not utf-8 text"
    # with the hint to set [input] encoding): Avro object containers open with "Obj"
    # and 0x01 (Avro specification (m)), SQLite databases with their header string
    # (SQLite file format, section 1.3.1 (m)); Arrow and Feather files in refuse_binary
    # archives of several formats the standard library cannot open (layouts43: a 7z
    # archive was refused as "not utf-8 text" with the hint to set [input] encoding):
    # 7z ("7z" BC AF 27 1C, 7-Zip's 7z format description (m)) and RAR ("Rar!" 1A 07,
    # RAR 4 and 5 archive format descriptions (m))
    (b"7z\xbc\xaf\x27\x1c", "a 7z archive", "unpack it"),
    (b"Rar!\x1a\x07", "a RAR archive", "unpack it"),
    (b"Obj\x01", "an Avro file", "export it as CSV"),
    (b"SQLite format 3\x00", "an SQLite database", "export the table of records as CSV"),
)


def _zip_members(data: bytes) -> list | None:
    """The names of the files a zip archive holds (folders left out), or None where the
    standard library cannot open it."""
    import io
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            return [info.filename for info in _user_files(archive)]
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        return None


#: Zip compression methods by number (APPNOTE.TXT, section 4.4.5 (m)) that the standard
#: library cannot expand: Deflate64, which Windows Explorer uses for large files, and the
#: methods of other archivers.
_ZIP_METHODS_UNREAD = {6: "Implode", 9: "Deflate64", 10: "PKWARE DCL Implode", 18: "IBM TERSE",
                       19: "IBM LZ77", 93: "Zstandard", 95: "XZ", 96: "JPEG", 97: "WavPack",
                       98: "PPMd", 99: "AES encryption"}


def unreadable_zip_members(data: bytes) -> str | None:
    """Why the tables of a zip archive cannot be read, where its members are encrypted
    (a password set when it was packed) or compressed by a method the standard library
    lacks; None where every member can be read or it is no zip.

    Such a zip was refused as "not a text table; unpack it" (layouts53), which names no
    cause: the user unpacks it with its password, or with an archiver that knows the
    method, and points ``[input] path`` at the text file.

    References
    ----------
    PKWARE Inc. APPNOTE.TXT - .ZIP File Format Specification, version 6.3.10, sections
    4.4.4 (general purpose bit 0: the file is encrypted) and 4.4.5 (compression method)
    (m).
    """
    import io
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            members = _user_files(archive)
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        return None
    # the methods the standard library expands: stored, deflate, bzip2, LZMA, and
    # Zstandard from Python 3.14
    readable = {zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED, zipfile.ZIP_BZIP2, zipfile.ZIP_LZMA,
                getattr(zipfile, "ZIP_ZSTANDARD", zipfile.ZIP_STORED)}
    # the members that may hold the table: a read-me or a picture beside it is no cause
    members = [info for info in members if not _document(info.filename)]
    encrypted = [info.filename for info in members if info.flag_bits & 0x1]
    if encrypted:
        return (f"its file(s) {', '.join(repr(name) for name in encrypted[:3])} are "
                "encrypted (packed with a password): unpack it with its password")
    unread = [(info.filename, _ZIP_METHODS_UNREAD.get(info.compress_type,
                                                      f"method {info.compress_type}"))
              for info in members
              if info.compress_type not in readable]
    if unread:
        name, method = unread[0]
        return (f"its file {name!r} is compressed by {method}, which this reader cannot "
                "expand: unpack it with an archiver that can (7-Zip, Info-ZIP's unzip)")
    return None


#: Archive members that hold no file of the user's: the resource forks macOS writes
#: beside each file it zips ("__MACOSX/._name", Apple's AppleDouble format (m)).
_ZIP_EXTRAS = "__MACOSX/"
#: Files a desktop writes into a folder by itself, which a zip of the folder takes along:
#: macOS Finder's view settings ".DS_Store", Windows Explorer's thumbnail cache
#: "Thumbs.db" and folder settings "desktop.ini" (m) (review47: a zip of a folder holding
#: one table and its .DS_Store was refused as "holding 2 files").
_DESKTOP_FILES = frozenset({".ds_store", "thumbs.db", "desktop.ini"})


def _user_files(archive) -> list:
    """The members of an open :class:`zipfile.ZipFile` that are files of the user's:
    folders, macOS resource forks and desktop files (:data:`_DESKTOP_FILES`) left out."""
    return [info for info in archive.infolist()
            if not info.is_dir() and not info.filename.startswith(_ZIP_EXTRAS)
            and info.filename.rsplit("/", 1)[-1].lower() not in _DESKTOP_FILES]


#: Documents a data portal packs beside a table (a read-me, the licence, how to cite the
#: data): by name (the stem, any extension) or by a document format's extension; since
#: layouts52 also a picture (a plot of the records, a photo of the site: PNG, JPEG, GIF,
#: SVG, TIFF), which holds no table either (a zip of the table and its plot was refused
#: as "holding 2 file(s)").
_DOCUMENT_STEMS = ("readme", "read_me", "read-me", "license", "licence", "citation")
_DOCUMENT_EXTENSIONS = (".pdf", ".md", ".html", ".htm", ".rtf", ".doc", ".docx", ".odt",
                        ".png", ".jpg", ".jpeg", ".gif", ".svg", ".tif", ".tiff")


#: Of those, the extensions no table is written in: a web page (.html, .htm) or a
#: Markdown file may be a portal's table, which the reader names as such (review55).
_TEXT_DOCUMENT_EXTENSIONS = (".md", ".html", ".htm")


def _document(name: str, *, surely: bool = False) -> bool:
    """True where an archive member's name is a document's, not a table's; `surely`:
    by its stem or a format no table is written in (not .html, .htm or .md)."""
    base = name.rsplit("/", 1)[-1].lower()
    extensions = tuple(extension for extension in _DOCUMENT_EXTENSIONS
                       if not surely or extension not in _TEXT_DOCUMENT_EXTENSIONS)
    return base.startswith(_DOCUMENT_STEMS) or base.endswith(extensions)


def single_zip_member(data: bytes) -> bytes | None:
    """The bytes of the one file a zip archive holds, or None where it holds another
    number (macOS's ``__MACOSX/`` forks and desktop files not counted), is a workbook, holds an archive or
    cannot be read (damaged, encrypted).

    A zip of one text table is the table, as a gzip file is (layouts36; refused before
    with "unpack it"); a zip of several files is refused by :func:`refuse_binary`,
    naming them. Documents beside one other file (a portal's "README.txt", "LICENSE",
    a PDF) are no table and are not counted (layouts40); a zip of documents only is
    refused by :func:`refuse_binary` as holding no table (review55).
    """
    import io
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            table = _one_table(_user_files(archive), lambda info: info.filename)
            return None if table is None else archive.read(table)
    except (zipfile.BadZipFile, OSError, ValueError, EOFError, RuntimeError,
            NotImplementedError):
        return None


def joined_zip_tables(data: bytes) -> tuple[bytes, list] | None:
    """The tables of a zip archive of several, one after another, and their names; or
    None.

    A logger's card or a portal's download packs a day's (or a month's) file each into
    one zip. They are read as one table where the zip holds two or more files besides
    documents (a read-me, a licence: left out), none an archive, a compressed file or a
    workbook's part, their names alike but for their digits (a date or a count: one
    series of files split by time; "site_a.csv" and "site_b.csv" are not), none opening
    with a UTF-16 or UTF-32 byte order mark, and every one opening with the same first
    line, byte for byte (one header, one layout): joined in
    the order of their names, each ending with a line end, a UTF-8 byte order mark kept
    on the first only. The headers written again are then read past by the reader as a
    header written again among the records, and the joined records meet the stamp checks
    of one file (a stamp twice, a disorder, another interval refused); a zip whose files
    differ in their first line or their names stays refused by :func:`refuse_binary`,
    naming them (round layouts48).

    Parameters
    ----------
    data : bytes
        The bytes of a zip archive.

    Returns
    -------
    tuple of (bytes, list of str) or None
        The joined bytes and the files' names in the order joined; None where the zip is
        not of this kind or cannot be read.

    References
    ----------
    ZIP File Format Specification (PKWARE APPNOTE 6.3) (m): members are files named by
    their paths; their order in the archive is the writer's, so names order them.
    """
    return _joined_series(_zip_series(data))


def _joined_series(series: tuple[list, list, str | None] | None) -> tuple[bytes, list] | None:
    """An archive's series (:func:`_series_parts`) as one text, each table ending with
    a line end, and the tables' names; None where it is no series or one breaks it."""
    if series is None or series[2] is not None:
        return None
    names, parts, _ = series
    return b"".join(p if p.endswith((b"\n", b"\r")) else p + b"\n" for p in parts), names


def _zip_series(data: bytes) -> tuple[list, list, str | None] | None:
    """(names, contents, the first file whose first line is not the first file's, named
    with both lines, or None) of a zip's tables named as one series (:func:`joined_zip_tables`), or None
    where they are no such series or the zip cannot be read."""
    import io
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            files = [info for info in _user_files(archive) if not _document(info.filename)]
            ordered = _series_order(files, lambda info: info.filename)
            if ordered is None:
                return None
            named = [(info.filename, archive.read(info)) for info in ordered]
    except (zipfile.BadZipFile, OSError, ValueError, EOFError, RuntimeError,
            NotImplementedError):
        return None
    return _series_parts(named)


def joined_tar_tables(data: bytes) -> tuple[bytes, list] | None:
    """The tables of a tar archive of several, one after another, and their names; or
    None: as :func:`joined_zip_tables` joins a zip's (round layouts52: a ``.tar.gz`` of
    a year's month files, one header, was refused as "holding 12 file(s)"). macOS tar's
    "._" forks and desktop files are left out (:func:`tar_files`), and so are documents;
    a name held twice is its last copy.

    Parameters
    ----------
    data : bytes
        The bytes of a tar archive (decompressed).

    Returns
    -------
    tuple of (bytes, list of str) or None
        The joined bytes and the tables' names in the order joined; None where the tar
        is not of this kind or cannot be read.

    References
    ----------
    IEEE Std 1003.1 (POSIX), pax, "ustar Interchange Format" (m): members are files
    named by their paths, in the writer's order, so names order them.
    """
    return _joined_series(_tar_series(data))


def tar_series_break(data: bytes) -> str | None:
    """The first table of a tar archive's series (:func:`joined_tar_tables`) whose first
    line is not the first table's, named with both lines.

    Parameters
    ----------
    data : bytes
        The bytes of a tar archive (decompressed).

    Returns
    -------
    str or None
        ``"'b.csv' opens with ... where 'a.csv' opens with ..."``, for the refusal of
        :func:`fluxpart.io._tar_table`; None where every table opens with the same line,
        or the archive is no series of tables (fewer than two, names that differ in more
        than their digits) or cannot be read.

    References
    ----------
    IEEE Std 1003.1 (POSIX), pax, "ustar Interchange Format" (m).
    """
    series = _tar_series(data)
    return None if series is None else series[2]


def _tar_series(data: bytes) -> tuple[list, list, str | None] | None:
    """As :func:`_zip_series`, of a tar archive's tables."""
    import io
    import tarfile

    files = tar_files(data)
    if files is None:
        return None
    ordered = _series_order([m for m in files if not _document(m.name)], lambda m: m.name)
    if ordered is None:
        return None
    with tarfile.open(fileobj=io.BytesIO(data), mode="r:") as archive:
        named = [(member.name, archive.extractfile(member).read()) for member in ordered]
    return _series_parts(named)


def _series_order(files: list, name_of) -> list | None:
    """An archive's tables (`files`, named by ``name_of(member)``, documents left out) in
    the order of their names, digits compared as numbers; None where they are fewer than
    two, one is a workbook's part or packed, or their names differ in more than digits."""
    if len(files) < 2 or any(
            name_of(member) in ("[Content_Types].xml", "mimetype")
            or name_of(member).lower().endswith(_PACKED) for member in files):
        return None
    if len({re.sub(r"\d+", "#", name_of(member)) for member in files}) != 1:
        return None
    # the digits compared as numbers: "day2" before "day10" (names alike but for their
    # digits, so the other parts of two names stand at the same places)
    return sorted(files, key=lambda member: [int(t) if t.isdigit() else t
                                             for t in re.split(r"(\d+)", name_of(member))])


def _series_parts(named: list) -> tuple[list, list, str | None] | None:
    """(names, contents, the first file whose first line is not the first file's, or
    None) of an archive's tables `named` ((name, bytes) in order), a UTF-8 mark kept on
    the first only; None where one is empty, wide (UTF-16, UTF-32) or opens with zeros."""
    names = [name for name, _ in named]
    parts = [named[0][1]] + [p.removeprefix(codecs.BOM_UTF8) for _, p in named[1:]]
    if any(p.startswith(_WIDE_MARKS) or not p.strip() for p in parts):
        return None
    first = parts[0].removeprefix(codecs.BOM_UTF8).splitlines()[0]
    if b"\0" in first:
        return None
    other = next((f"{name!r} opens with {_shown_line(p.splitlines()[0])} where "
                  f"{names[0]!r} opens with {_shown_line(first)}"
                  for name, p in zip(names[1:], parts[1:], strict=True)
                  if p.splitlines()[0] != first), None)
    return names, parts, other


def _shown_line(line: bytes) -> str:
    """A member's first line as a message shows it: decoded leniently, cut at 60
    characters."""
    text = line.decode("utf-8", errors="replace")
    return repr(text if len(text) <= 60 else text[:57] + "...")


#: Names of members that are packed or compressed (an archive in an archive).
_PACKED = (".zip", ".7z", ".tar", ".tgz", ".gz", ".bz2", ".xz")
#: Byte order marks of UTF-32 and UTF-16 (a member in a wide encoding is not joined).
_WIDE_MARKS = (codecs.BOM_UTF32_LE, codecs.BOM_UTF32_BE, codecs.BOM_UTF16_LE,
               codecs.BOM_UTF16_BE)


def _one_table(files: list, name_of):
    """The one member of an archive's `files` (the user's, named by ``name_of(member)``)
    that is a table, or None: documents beside one other file are not counted, and a
    workbook's part, an archive inside, several tables or documents only are none."""
    tables = [member for member in files if not _document(name_of(member))]
    if len(tables) == 1:
        files = tables
    elif files and all(_document(name_of(member), surely=True) for member in files):
        # documents only (a portal's read-me without its table): no table to read,
        # refused by refuse_binary (review55: the read-me was read as the table)
        return None
    if len(files) != 1 or name_of(files[0]) in ("[Content_Types].xml", "mimetype") \
            or name_of(files[0]).lower().endswith((".zip", ".7z", ".tar", ".tgz")):
        return None
    return files[0]


def is_tar(data: bytes) -> bool:
    """True where `data` is a tar archive: "ustar" at byte 257 of its first header
    (POSIX.1-1988 ustar and GNU tar headers alike; POSIX.1-2001 pax, "pax Interchange
    Format" (m))."""
    return data[257:262] == b"ustar"


def tar_files(data: bytes) -> list | None:
    """The user's files a tar archive holds (folders, macOS "._" forks and
    desktop files left out), as :class:`tarfile.TarInfo`, or None where it cannot be
    read (cut short).

    A name the archive holds twice (a file added again by ``tar -r`` or ``tar -u`` after
    the logger wrote on) is its last copy only, the one unpacking leaves (review82: both
    copies were read one after another as a series of two tables).

    References
    ----------
    IEEE Std 1003.1 (POSIX), pax, "ustar Interchange Format" (m); Python's
    :meth:`tarfile.TarFile.getmember`: "if a member occurs more than once in the
    archive, its last occurrence is assumed to be the most up-to-date version".
    """
    import io
    import tarfile

    try:
        with tarfile.open(fileobj=io.BytesIO(data), mode="r:") as archive:
            files = [member for member in archive.getmembers() if member.isfile()
                     and not member.name.rsplit("/", 1)[-1].startswith("._")
                     and member.name.rsplit("/", 1)[-1].lower() not in _DESKTOP_FILES]
    except (tarfile.TarError, OSError, ValueError, EOFError):
        return None
    return list({member.name: member for member in files}.values())


def single_tar_member(data: bytes) -> bytes | None:
    """The bytes of the one table a tar archive holds (as :func:`single_zip_member`
    counts them; macOS tar's "._" resource forks, written beside each file, not
    counted), or None where it holds another number or cannot be read.

    A tar archive of one text table (``.tar``, ``.tar.gz``, ``.tgz``), as a portal packs
    a download, is the table, as a zip of one file is (layouts43; refused before, a plain
    tar as "zero bytes ... a write cut short by a power failure", its header's padding).

    References
    ----------
    IEEE Std 1003.1 (POSIX), pax, "ustar Interchange Format" (m).
    """
    import io
    import tarfile

    files = tar_files(data)
    table = None if files is None else _one_table(files, lambda member: member.name)
    if table is None:
        return None
    with tarfile.open(fileobj=io.BytesIO(data), mode="r:") as archive:
        return archive.extractfile(table.name).read()


def refuse_binary(data: bytes, path) -> None:
    """Raise InputFileError naming the format when `data` starts like a binary file.

    Without this, a compressed file or a workbook fails on its first non-UTF-8 byte
    with a hint to change ``[input] encoding``, which cannot help.
    """
    signatures = list(_BINARY_SIGNATURES)
    if data.startswith(b"BZh") and data[4:10] == b"1AY&SY":
        signatures.append((b"BZh", "bzip2-compressed", "decompress it (e.g. bunzip2)"))
    if data.startswith(b"PK\x05\x06"):
        # the end-of-central-directory record first: a zip holding nothing at all
        # (APPNOTE.TXT, section 4.3.16 (m)); named "empty; expected a header line"
        # before, though its 22 bytes are not empty (review89)
        raise InputFileError(f"[input] path: {str(path)!r} is an empty zip archive (it "
                             "holds no file); point [input] path at the text table, or at "
                             "a zip that holds it")
    if data.startswith(b"PK\x03\x04"):
        unreadable = unreadable_zip_members(data)
        if unreadable:
            raise InputFileError(f"[input] path: {str(path)!r} is a zip archive whose table "
                                 f"cannot be read: {unreadable}, and point [input] path at "
                                 "the text file")
        members = _zip_members(data)
        if members is not None and not {"[Content_Types].xml", "mimetype"} & set(members):
            # not a workbook (whose parts these are, ECMA-376 part 2 and OpenDocument
            # 1.2 part 3 (m)): the files it holds are named (layouts31: a zip holding a
            # gzip file was named "an .xlsx or .ods workbook is one")
            shown = ", ".join(repr(name) for name in members[:3])
            more = f" and {len(members) - 3} more" if len(members) > 3 else ""
            archives = [name for name in members
                        if name.lower().endswith((".zip", ".7z", ".tar", ".tgz", ".tar.gz"))]
            compressed = [name for name in members
                          if name.lower().endswith((".gz", ".bz2", ".xz"))]
            inner = (f"; {archives[0]!r} is itself an archive: unpack it too" if archives
                     else f" ({compressed[0]!r} is read as it is, compressed)" if compressed
                     else "")
            series = _zip_series(data)
            if series is not None and series[2] is not None:
                # one series of files, read one after another where their first lines
                # agree (layouts48): name the file that breaks the layout
                inner = (f" (read one after another where every file opens with the same "
                         f"line: {series[2]}; a changed header, or a title line that names "
                         f"each file's day?)")
            if members and all(_document(name, surely=True) for name in members):
                # a read-me, a licence, a PDF and no table (review55)
                raise InputFileError(
                    f"[input] path: {str(path)!r} is a zip archive holding documents only "
                    f"({shown}{more}: a read-me, a licence, a PDF or a picture by their "
                    "names), no table of records; point [input] path at the data file, or "
                    "at a zip that holds it")
            if not members:
                # folders alone: "holding 0 file(s) ()" before (review89)
                raise InputFileError(
                    f"[input] path: {str(path)!r} is a zip archive holding folders only, "
                    "no file; point [input] path at the text table, or at a zip that "
                    "holds it")
            raise InputFileError(f"[input] path: {str(path)!r} is a zip archive holding "
                                 f"{len(members)} file(s) ({shown}{more}), not a text table; "
                                 f"unpack it{inner} and point [input] path at the text "
                                 "file(s)")
        if members is not None:
            # a workbook's parts (layouts42: "unpack it" cannot help a workbook, whose
            # unpacked parts are XML; no spreadsheet reader is a dependency)
            kind = ("an OpenDocument spreadsheet (.ods)" if "mimetype" in members
                    else "an Office Open XML workbook (.xlsx)")
            raise InputFileError(f"[input] path: {str(path)!r} is {kind}, not a text "
                                 "table; in the spreadsheet program save the sheet of "
                                 "records as CSV (one header line of names, one line per "
                                 "record) and point [input] path at the CSV file")
    for signature, kind, fix in signatures:
        if data.startswith(signature):
            raise InputFileError(f"[input] path: {str(path)!r} is {kind}, not a text table; "
                                 f"{fix} and point [input] path at the text file")


#: The first line of a file that holds records in another notation than a delimited
#: table: its kind and the fix. XML declarations and tags (W3C XML 1.0, section 2.8 (m)),
#: HTML documents and tables (WHATWG HTML (m); web portals and loggers' web pages save
#: a table as HTML, often named ``.xls``), the XML of Excel 2003 workbooks (Microsoft
#: SpreadsheetML, namespace ``urn:schemas-microsoft-com:office:spreadsheet`` (m)),
#: JSON values (RFC 8259) and JSON Lines, one JSON object per line (jsonlines.org (m)).
_TABLE_FIX = ("write the records as a delimited text table (one header line of names, one "
              "line per record) in a copy")
_SHEET_FIX = "open it in a spreadsheet and save the sheet as CSV"
_TAGS_ONLY = re.compile(r"(?:<[^<>]*>\s*)+")


#: Line ends in universal newlines mode (CR LF taken whole).
_LINE_END = re.compile(r"\r\n|\r|\n")
#: The line boundaries of :meth:`str.splitlines` (CR LF taken whole).
_SPLITLINES_END = re.compile("\r\n|[\n\r\v\f\x1c\x1d\x1e\x85\u2028\u2029]")


def _through_line(text: str, lines: int, line_end: re.Pattern) -> str:
    """`text` up to and with the `lines`-th match of `line_end`; all of it where it holds
    fewer; "" for no lines."""
    if lines <= 0:
        return ""
    for number, end in enumerate(line_end.finditer(text), start=1):
        if number == lines:
            return text[:end.end()]
    return text


def universal_head(text: str, lines: int) -> str:
    """The start of `text` that holds its first `lines` lines (universal newlines).

    ``io.StringIO(universal_head(text, n), newline=None)`` yields the same first `n`
    lines as ``io.StringIO(text, newline=None)``: the cut falls right after the n-th line
    end (CR LF, CR or LF, a CR LF taken whole), or the whole text where it has fewer.
    The reader's checks of a few head lines read this start only: a StringIO of a whole
    ten-year file (10 MB) took 18 ms per check, one of a year's 0.06 ms (round speed53).
    `text` is decoded text, `lines` >= 0; returns a prefix of `text`.

    References
    ----------
    Python Software Foundation. io.StringIO, ``newline=None``: universal newlines mode,
    "\\n", "\\r" and "\\r\\n" each end a line (m).
    """
    return _through_line(text, lines, _LINE_END)


def leading_lines(text: str, lines: int) -> list:
    """``text.splitlines()[:lines]``, split from the start of `text` that holds them only.

    The reader takes its header line and the few lines around it from files of up to
    millions of lines: a whole ``splitlines`` of a ten-year file took 15 ms, of a year
    1 ms (round speed53). The cut falls right after the `lines`-th boundary that
    :meth:`str.splitlines` splits at (a CR LF taken whole), so the lines are the same.

    References
    ----------
    Python Software Foundation. str.splitlines: the line boundaries (m).
    """
    return _through_line(text, lines, _SPLITLINES_END).splitlines()


def markup_message(text: str, path, header_at: int = 0) -> str:
    """Name a file whose records are XML, HTML or JSON rather than a delimited table, or "".

    Parameters
    ----------
    text : str
        The decoded file.
    path : str or path-like
        The file, named in the message.
    header_at : int
        Lines above the header line (``[input] rows_before_header``): the line judged
        is the first non-blank one from there on.

    Returns
    -------
    str
        One message naming the notation and the fix, "" where the header line reads as
        a table's.

    Notes
    -----
    Read as a table, such a file was refused for a cause it does not have (layouts28):
    JSON Lines as "a header line with other names" (each line's keys), a JSON array as
    "a header but no records", XML as "set delimiter = whitespace", an HTML table by
    its first tag as the only column. The judged line must be a JSON value or object
    start, an XML declaration, a document type, or tags and nothing else: a header whose
    names hold brackets or angle brackets between delimiters (``<Tair>,<Rg>``) is none.

    References
    ----------
    RFC 8259, The JavaScript Object Notation (JSON) Data Interchange Format (m); W3C,
    Extensible Markup Language (XML) 1.0, 5th ed. (m); WHATWG HTML Living Standard (m).
    """
    import io
    import itertools
    import json

    # the first lines only (universal newlines: CR-only and CRLF files alike)
    lines = list(itertools.islice(io.StringIO(universal_head(text, header_at + 20),
                                              newline=None), header_at, header_at + 20))
    nonblank = [line.strip() for line in lines if line.strip()]
    shown = nonblank[0] if nonblank else ""
    # a line of JSON or of tags above the lines of a table is a preamble (a JSON comment,
    # a title in angle brackets): that is rows_before_header's matter, named elsewhere
    following = nonblank[1] if len(nonblank) > 1 else ""
    kind, fix = "", ""
    lower = shown.lower()
    if shown.startswith(("{", "[")) and (
            not following or following.startswith(("{", "[", '"', "]", "}"))):
        try:
            value = json.loads(shown)
        except ValueError:
            value = None
        if isinstance(value, dict) or shown in ("{", "[", "[{") or shown.startswith(
                ('{"', '[{"', '[["', "[{ ")):
            if isinstance(value, dict) and following.startswith("{"):
                kind = "JSON Lines (one JSON object per line)"
            else:
                kind = "JSON"
            fix = _TABLE_FIX
    elif lower.startswith(("<!doctype html", "<html", "<table")) or (
            lower.startswith("<") and "<table" in text[:4096].lower()):
        kind, fix = "an HTML page or table (as web portals save a sheet, often as .xls)", \
            _SHEET_FIX
    elif "urn:schemas-microsoft-com:office:spreadsheet" in text[:4096] or \
            'progid="excel.sheet"' in text[:4096].lower():
        kind, fix = "an Excel 2003 XML workbook", _SHEET_FIX
    elif lower.startswith("<?xml") or (_TAGS_ONLY.fullmatch(shown) and (
            not following or following.startswith("<"))):
        kind, fix = "XML", _TABLE_FIX
    if not kind:
        return ""
    return (f"input file {str(path)!r} holds {kind}, not a delimited text table "
            f"(its line {shown[:40]!r}); {fix} and point [input] path at it")


def owner_file_message(path, size: int) -> str:
    """Name a spreadsheet program's owner file ("~$" and the name of an open file), or "".

    Excel (and LibreOffice for Microsoft formats) writes a small file ``~$`` + the name
    beside a file it has open, holding who opened it; it stays after a crash. A path
    pattern (``*.csv``) catches it beside the month files, and it was refused as UTF-16
    text (layouts28), a fix that cannot help.

    References
    ----------
    Microsoft support, "Description of how Word creates temporary files" (the ``~$``
    owner file, 162 bytes) (m).
    """
    name = Path(path).name
    if not name.startswith("~$") or size > 4096:
        return ""
    return (f"[input] path: {str(path)!r} is a spreadsheet program's owner file (\"~$\" "
            "and a file's name: who has that file open, written while it is open and left "
            "by a crash), not records: close the file in the spreadsheet or delete the "
            "leftover, or narrow [input] path so that it is not matched")


def unicode_form_hint(path) -> str:
    """The fix for a missing path whose name exists in another Unicode form, or "".

    Parameters
    ----------
    path : str or path-like
        A path that does not exist.

    Returns
    -------
    str
        Starts with "; " (appended to a message): the first missing part of `path`, the
        entry of its folder that is the same name in another Unicode normal form, and
        the fix; "" where there is none.

    Notes
    -----
    An accented letter can be one code point (composed, NFC: what Linux keyboards and
    most editors write) or a letter and a combining mark (decomposed, NFD: what macOS
    HFS+ stored and what archives and copies made on a Mac carry on). The two look the
    same in every listing, but on Linux they are different names, so a config typed
    ``grün.csv`` does not find a copied ``grün.csv``: "does not exist" beside a file
    that looks identical. ``fluxpart verify`` already looks for the other form of a
    recorded name; a run reads only the name as written, so it is named here.

    References
    ----------
    The Unicode Standard, Annex #15, "Unicode Normalization Forms" (NFC, NFD) (m);
    Apple, "File System Programming Guide": HFS+ stores names decomposed (m).
    """
    import unicodedata

    path = Path(path)
    parts = path.parts
    for depth in range(1, len(parts) + 1):
        here = Path(*parts[:depth])
        try:
            if here.exists() or here.is_symlink():
                continue
            wanted = unicodedata.normalize("NFC", here.name)
            twins = sorted(entry.name for entry in here.parent.iterdir()
                           if entry.name != here.name
                           and unicodedata.normalize("NFC", entry.name) == wanted)
        except (OSError, ValueError):
            return ""
        if not twins:
            return ""
        form = "NFD" if unicodedata.is_normalized("NFC", here.name) else "NFC"
        return (f"; {str(here.parent)!r} has {twins[0]!r}, the same name in another Unicode "
                f"form ({form}: accented letters stored "
                f"{'decomposed, as copies made on a Mac keep them' if form == 'NFD' else 'composed'}"
                "), which is another name here: rename it, or write the path as it is "
                "spelled there")
    return ""


def other_system_path_hint(text: str) -> str:
    """The fix for a path written in Windows form outside Windows, or "".

    Outside Windows a backslash is a character of a file name, not a separator, and a
    drive letter (``C:``) or a ``\\\\server`` share names no folder: such a path is looked
    up as odd names and matches nothing. Starts with "; " (appended to a message).
    """
    text = str(text)
    drive = text.startswith("\\\\") or any(
        re.fullmatch(r"[A-Za-z]:", part) for part in re.split(r"[\\/]", text))
    if os.sep == "\\" or ("\\" not in text and not drive):
        return ""
    slashes = ("write the path with forward slashes ('/'), which work on every system: a "
               "backslash is part of the file name outside Windows")
    mount = ("give the folder as this machine mounts it (a drive letter or \\\\server "
             "share names no folder here), or relative to the file that lists it")
    if not drive:
        return f"; {slashes}"
    return f"; {slashes}, and {mount}" if "\\" in text else f"; {mount}"


def odd_entry(path: Path) -> str:
    """What a glob match that is neither a file nor a folder is, or ``""``.

    A glob lists a directory's entries, so it also matches a symbolic link whose target
    is missing (a month's file on a network share that is not mounted, an archive moved
    away), a loop of links, a named pipe, a device or a socket. Taking only the regular
    files dropped such an entry without a word, and the budget lost its records.

    Parameters
    ----------
    path : pathlib.Path
        One match of the pattern.

    Returns
    -------
    str
        ``"a symbolic link to '...', which does not exist"``, ``"a loop of symbolic
        links"``, ``"a named pipe"``, ``"a device"``, ``"a socket"``; ``""`` for a file, a
        folder or an entry that has gone meanwhile (reading it then names it).

    References
    ----------
    POSIX.1-2017, ``stat(2)`` and ``<sys/stat.h>`` file types; ``path_resolution(7)``:
    ELOOP for too many symbolic links, ENOENT for a dangling one (m).
    """
    try:
        mode = path.stat().st_mode
    except OSError as error:
        if not path.is_symlink():
            return ""
        if error.errno == errno.ELOOP:
            return "a loop of symbolic links"
        try:
            target = os.readlink(path)
        except OSError:
            target = "?"
        return f"a symbolic link to {target!r}, which does not exist"
    return mode_kind(mode)


def mode_kind(mode: int) -> str:
    """The kind of an entry of ``stat(2)``'s `mode` that is not a file or a folder.

    Returns
    -------
    str
        ``"a named pipe"``, ``"a device"`` (character or block) or ``"a socket"``; ``""``
        for a regular file, a folder or a symbolic link.

    References
    ----------
    inode(7): ``S_ISFIFO``, ``S_ISCHR``, ``S_ISBLK`` and ``S_ISSOCK`` (m).
    """
    if stat.S_ISFIFO(mode):
        return "a named pipe"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return ""


def printable_line(text: str) -> str:
    """`text` with every character that is not printable written as an escape.

    A file name may hold a line break, a tab or a terminal control sequence (``ESC``,
    ``\\x1b[2J`` clears the screen), and a manifest edited by hand may hold them in any
    field: printed as they are, they split verify's one-line ``result:`` summary or
    rewrote the auditor's terminal. Printable characters of any script stay as they are.

    Parameters
    ----------
    text : str
        Text from a manifest (names, the seed, the release).

    Returns
    -------
    str
        One line: each non-printable character as ``\\xNN``, ``\\uNNNN`` or
        ``\\UNNNNNNNN`` (Python's escapes for its code point).

    References
    ----------
    Python documentation, ``str.isprintable`` (Unicode categories "Other" and
    "Separator" other than the space are not printable) (m); ECMA-48 control functions,
    ESC (0x1B) introducing control sequences (m).
    """
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii")
                   for c in text)
