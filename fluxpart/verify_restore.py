"""Restoring a recorded input file's exact bytes from a re-saved or compressed copy.

A text file re-saved "with the same content" (line endings, a byte-order mark, another
Unicode encoding, a final line break: :func:`_text_variants`) or compressed to archive it
(gzip, bzip2, xz: :data:`PACKED_FORMS`) is restored where one variant gives back the
recorded SHA-256 exactly (:func:`_restored_text`, :func:`_packed_beside`); anything else
stays a difference. Memory stays bounded whatever the file (:data:`MOST_UNPACKED_BYTES`,
:data:`MOST_RESAVED_BYTES`).

References
----------
NIST (2015). FIPS 180-4: Secure Hash Standard.
Deutsch, P. (1996). RFC 1952: GZIP file format specification version 4.3.
Seward, J. bzip2 and libbzip2: the .bz2 file format (m); Tukaani (2009). The .xz file
format, version 1.0.4.
The Unicode Standard, section 23.8 (byte-order marks).
"""

from __future__ import annotations

import codecs
import gzip
import hashlib
import zlib
from pathlib import Path

try:
    import bz2
except ImportError:   # a Python built without libbz2: bzip2 files are not unpacked
    bz2 = None
try:
    import lzma
except ImportError:   # a Python built without liblzma: xz files are not unpacked
    lzma = None




#: Text encodings an editor or a shell may re-save a text file in, told from its
#: byte-order mark (the Unicode standard, section 23.8); without one, UTF-8 is tried.
_MARKS = ((codecs.BOM_UTF32_LE, "utf-32"), (codecs.BOM_UTF32_BE, "utf-32"),
          (codecs.BOM_UTF8, "utf-8-sig"), (codecs.BOM_UTF16_LE, "utf-16"),
          (codecs.BOM_UTF16_BE, "utf-16"))


def _text_variants(data: bytes):
    """Yield (bytes, change) for the re-savings of `data` that keep its text.

    A text file re-saved "with the same content" may get its line endings converted
    (CR LF for LF or the reverse: git core.autocrlf, ``unzip -a``), a byte-order mark
    added or dropped, another Unicode encoding (UTF-16 from Windows Notepad or
    PowerShell 5.1), or a final line break added or dropped (most editors): each
    variant undoes a combination of these, written as UTF-8. Nothing for bytes that
    are not Unicode text.
    """
    encoding = next((name for mark, name in _MARKS if data.startswith(mark)), "utf-8")
    try:
        text = data.decode(encoding)
    except UnicodeDecodeError:
        return
    unix = text.replace("\r\n", "\n")
    bare = unix.rstrip("\n")
    for body in dict.fromkeys((unix, bare, bare + "\n")):
        for newline in ("\n", "\r\n"):
            for mark in (b"", codecs.BOM_UTF8):
                yield mark + body.replace("\n", newline).encode("utf-8")


def _restored_text(path: Path, sha, scratch: Path, number: int) -> Path | None:
    """The recorded input file restored from `path` in `scratch`, or None.

    Where `path` holds the recorded file's text re-saved otherwise (line endings,
    byte-order mark, Unicode encoding, final line break: :func:`_text_variants`), or
    compressed (gzip, bzip2 or xz: the name then loses the tool's suffix), and one
    variant gives back the recorded SHA-256 exactly, the recorded bytes are known whole:
    a copy of them is written under the same file name (its suffix chooses the reader)
    in a folder of its own in `scratch` and returned. Any other difference gives None.

    Memory stays bounded whatever the file: a compressed file is unpacked a chunk at a
    time and given up past `MOST_UNPACKED_BYTES` (a decompression bomb), and re-savings
    are looked for only in files of at most `MOST_RESAVED_BYTES` (each variant is a copy
    in memory); a larger file that differs stays a difference.

    References
    ----------
    NIST (2015). FIPS 180-4: Secure Hash Standard (SHA-256: equal digests stand for
    equal bytes).
    Deutsch, P. (1996). RFC 1952: GZIP file format specification version 4.3.
    Seward, J. bzip2 and libbzip2: the .bz2 file format (m); Tukaani (2009). The .xz file
    format, version 1.0.4 (the magic bytes of :data:`PACKED_FORMS`).
    """
    members = _zip_files(path)
    if members:
        # a zip of one file, as run reads it (``--input tower.csv.zip``, round faults49),
        # or of the input among other files (its config, its folder: round review96, "NOT
        # reproduced ... not the input file" though it held it), each tried by its
        # SHA-256 within one unpacking budget
        for member in _within_budget(path, members):
            restored = _zip_restored(path, member, sha, scratch, number)
            if restored is not None:
                return restored
        return None
    unpacked = _unpacked(path)
    if unpacked is not None:
        # compressed for the archive; the recorded file may be the text inside, as it is
        # or re-saved
        digest, data, suffix = unpacked
        name = path.stem if path.suffix.lower() == suffix else path.name
        if digest == sha:
            return (_restored_copy(data, name, scratch, number) if data is not None
                    else _unpacked_copy(path, suffix, sha, name, scratch, number))
    else:
        name = path.name
        try:
            data = path.read_bytes() if path.stat().st_size <= MOST_RESAVED_BYTES else None
        except OSError:
            return None
    if data is None:
        return None
    for converted in _text_variants(data):
        if converted != data and hashlib.sha256(converted).hexdigest() == sha:
            return _restored_copy(converted, name, scratch, number)
    return None


#: The compressions a user applies to a file to archive it, by their magic bytes and the
#: suffix their tools add: gzip (RFC 1952: 1f 8b), bzip2 ("BZh", Seward's bzip2 file
#: format (m)) and xz (FD "7zXZ" 00, the .xz file format 1.0.4, Tukaani 2009).
PACKED_FORMS = ((b"\x1f\x8b", ".gz"), (b"BZh", ".bz2"), (b"\xfd7zXZ\x00", ".xz"))


#: Most bytes of a file in which re-savings of the recorded text are looked for (held in
#: memory several times over): 256 MiB, about a hundred site-years of half-hourly records
#: of 150 bytes (17 520 records a year), far more than one tower's input file.
MOST_RESAVED_BYTES = 2**28


#: Most bytes unpacked from a compressed file before it is given up: 4 GiB, the largest
#: file verify hashes elsewhere; a small file that unpacks to more (a decompression bomb:
#: DEFLATE reaches about 1000:1, bzip2 and xz far more) cannot hold a tower's input.
MOST_UNPACKED_BYTES = 4 * 2**30


_CHUNK_BYTES = 2**20


def _packed_opener(suffix: str):
    """The standard library's reader of the compression `suffix` (of `PACKED_FORMS`), or
    None where this Python was built without it (bz2 and lzma are optional modules)."""
    module = {".gz": gzip, ".bz2": bz2, ".xz": lzma}[suffix]
    return None if module is None else module.open


def _packed_chunks(path: Path, suffix: str):
    """Yield the unpacked bytes of the compressed file `path` a chunk at a time; raise
    ValueError past `MOST_UNPACKED_BYTES`, and the reader's error where it is damaged."""
    size = 0
    with _packed_opener(suffix)(path, "rb") as stream:
        while chunk := stream.read(_CHUNK_BYTES):
            size += len(chunk)
            if size > MOST_UNPACKED_BYTES:
                raise ValueError(f"unpacks to more than {MOST_UNPACKED_BYTES} bytes")
            yield chunk


#: What a damaged or over-long compressed file raises while it is unpacked.
_UNPACK_ERRORS = (OSError, EOFError, ValueError, zlib.error) + (
    (lzma.LZMAError,) if lzma is not None else ())


def _hashed_chunks(chunks, errors) -> tuple[str, bytes | None] | None:
    """(the SHA-256 of the byte `chunks`, their bytes or None where more than
    `MOST_RESAVED_BYTES`), read a chunk at a time; None where reading them raises one of
    `errors`."""
    digest, held, size = hashlib.sha256(), [], 0
    try:
        for chunk in chunks:
            digest.update(chunk)
            size += len(chunk)
            if held is not None and size <= MOST_RESAVED_BYTES:
                held.append(chunk)
            else:
                held = None
    except errors:
        return None
    return digest.hexdigest(), (b"".join(held) if held is not None else None)


def _unpacked(path: Path) -> tuple[str, bytes | None, str] | None:
    """(the SHA-256 of the bytes inside, those bytes or None where more than
    `MOST_RESAVED_BYTES`, the tool's suffix) where the file `path` is one of
    `PACKED_FORMS` whole, else None (not compressed, damaged, unreadable, or unpacking
    to more than `MOST_UNPACKED_BYTES`). Unpacked a chunk at a time, so memory stays
    bounded (a decompression bomb beside a recorded input exhausted it)."""
    try:
        with path.open("rb") as handle:
            head = handle.read(8)
    except OSError:
        return None
    suffix = next((tail for magic, tail in PACKED_FORMS if head.startswith(magic)), None)
    if suffix is None or _packed_opener(suffix) is None:
        return None
    hashed = _hashed_chunks(_packed_chunks(path, suffix), _UNPACK_ERRORS)
    return None if hashed is None else (*hashed, suffix)


def _checked_copy(chunks, errors, sha, name: str, scratch: Path,
                  number: int) -> Path | None:
    """The byte `chunks` written as `name` in a folder of its own in `scratch`, a chunk at
    a time; None (and nothing left) where reading them raises one of `errors` or the bytes
    written do not have the SHA-256 `sha` (the source changed since it was hashed)."""
    folder = scratch / f"restored-input-{number}"
    folder.mkdir(parents=True, exist_ok=True)
    target, digest = folder / name, hashlib.sha256()
    try:
        with target.open("wb") as out:
            for chunk in chunks:
                digest.update(chunk)
                out.write(chunk)
    except errors:
        target.unlink(missing_ok=True)
        return None
    if digest.hexdigest() != sha:
        target.unlink(missing_ok=True)
        return None
    return target


def _unpacked_copy(path: Path, suffix: str, sha, name: str, scratch: Path,
                   number: int) -> Path | None:
    """Unpack the compressed file `path` (too large to hold) as `name` in a folder of
    its own in `scratch`, a chunk at a time; None (and nothing left) where the bytes
    written do not have the SHA-256 `sha` (the file changed since it was hashed)."""
    return _checked_copy(_packed_chunks(path, suffix), _UNPACK_ERRORS, sha, name, scratch,
                         number)


def _packed_beside(path: Path, sha, scratch: Path, number: int):
    """(the compressed file, the recorded bytes restored from it) where the recorded
    input `path` is gone and ``NAME.gz``, ``.bz2`` or ``.xz`` beside it holds its bytes
    exactly (the input compressed to archive it after the run: ``gzip tower.csv``
    deletes tower.csv), else None. The recorded SHA-256 decides, as for any file found
    (round faults47: "does not exist; give --input" before, though the bytes were
    beside it)."""
    for _, suffix in PACKED_FORMS:
        packed = path.with_name(path.name + suffix)
        if packed.is_file():
            restored = _restored_text(packed, sha, scratch, number)
            if restored is not None:
                return packed, restored
    return _zipped_beside(path, sha, scratch, number)


#: The one file a zip archive beside a gone input may hold to stand for it: ``NAME.zip``
#: (``zip -m tower.csv.zip tower.csv``) and ``STEM.zip`` (a Windows "compressed (zipped)
#: folder" of the file, named after it without its suffix (m)). ``run`` reads a zip of
#: one table as that table (:func:`fluxpart._validate.single_zip_member`).
def _zip_names(path: Path) -> list[Path]:
    return list(dict.fromkeys((path.with_name(path.name + ".zip"),
                               path.with_name(path.stem + ".zip"))))


def _zip_files(archive: Path) -> list[str] | None:
    """The names of the files the zip archive `archive` holds (folders and macOS's
    ``__MACOSX/`` forks not counted), or None (no zip, damaged or unreadable)."""
    import zipfile

    try:
        with archive.open("rb") as handle:
            if handle.read(4) != b"PK\x03\x04":
                return None
        with zipfile.ZipFile(archive) as packed:
            return [info.filename for info in packed.infolist() if not info.is_dir()
                    and not info.filename.startswith("__MACOSX/")]
    except (zipfile.BadZipFile, OSError, ValueError, EOFError, RuntimeError):
        return None


def _within_budget(archive: Path, members: list[str]) -> list[str]:
    """The files `members` of the zip `archive` whose sizes, as its directory states them
    (``zipfile`` reads no byte past a stated size), add up to `MOST_UNPACKED_BYTES` at
    most, in the archive's order: a zip of many large files is not unpacked whole."""
    import zipfile

    try:
        with zipfile.ZipFile(archive) as packed:
            sizes = {info.filename: info.file_size for info in packed.infolist()}
    except (zipfile.BadZipFile, OSError, ValueError, EOFError, RuntimeError):
        return []
    taken, total = [], 0
    for member in members:
        total += sizes.get(member, 0)
        if total > MOST_UNPACKED_BYTES:
            break
        taken.append(member)
    return taken


def _zip_candidates(archive: Path, name: str) -> list[str]:
    """The files of the zip `archive` that may hold the gone input named `name`: its one
    file (of any name: the SHA-256 decides), else those of that name in any of its
    folders (a zip of the input with its config, or of the folder holding it: round
    review96, refused before as holding two files). [] where none or no zip."""
    members = _zip_files(archive) or []
    if len(members) == 1:
        return members
    return [member for member in members if _member_file_name(member) == name]


def _zip_restored(archive: Path, member: str, sha, scratch: Path, number: int) -> Path | None:
    """The recorded input restored from the one file `member` of the zip `archive`: its
    bytes hashed a chunk at a time (given up past `MOST_UNPACKED_BYTES`) and written to
    `scratch` where they, as they are or re-saved (:func:`_text_variants`), have the
    recorded SHA-256 `sha`; else None, nothing written.

    Nothing is written before the bytes are known to be the input's (round review96: a
    small zip unpacking to gigabytes of zeros was written whole to the scratch folder
    before its SHA-256 was compared, and a zip holding itself, a zip quine, was opened
    again and again until Python's recursion limit stopped verify with a traceback)."""
    name = _member_file_name(member)
    hashed = _hashed_chunks(_zip_chunks(archive, member), _ZIP_ERRORS)
    if hashed is None:
        return None
    hexdigest, data = hashed
    if hexdigest == sha:
        if data is not None:
            return _restored_copy(data, name, scratch, number)
        return _zip_copy(archive, member, sha, name, scratch, number)
    for converted in _text_variants(data) if data is not None else ():
        if converted != data and hashlib.sha256(converted).hexdigest() == sha:
            return _restored_copy(converted, name, scratch, number)
    return None


#: What reading a damaged, encrypted or unsupported zip member raises.
_ZIP_ERRORS = (OSError, ValueError, EOFError, RuntimeError, NotImplementedError, zlib.error)


def _zip_chunks(archive: Path, member: str):
    """Yield the bytes of the file `member` of the zip `archive` a chunk at a time; raise
    ValueError past `MOST_UNPACKED_BYTES` and for a damaged archive (``zipfile``'s
    BadZipFile re-raised as one), or another of `_ZIP_ERRORS`."""
    import zipfile

    size = 0
    try:
        with zipfile.ZipFile(archive) as packed, packed.open(member) as stream:
            while chunk := stream.read(_CHUNK_BYTES):
                size += len(chunk)
                if size > MOST_UNPACKED_BYTES:
                    raise ValueError(f"unpacks to more than {MOST_UNPACKED_BYTES} bytes")
                yield chunk
    except zipfile.BadZipFile as error:
        raise ValueError(str(error)) from None


def _zip_copy(archive: Path, member: str, sha, name: str, scratch: Path,
              number: int) -> Path | None:
    """The file `member` of the zip `archive` (too large to hold) unpacked as `name` in a
    folder of its own in `scratch`; None (and nothing left) where the bytes written do not
    have the SHA-256 `sha` (the archive changed since it was hashed)."""
    return _checked_copy(_zip_chunks(archive, member), _ZIP_ERRORS, sha, name, scratch,
                         number)


def _member_file_name(member: str) -> str:
    """The file name of the zip member `member` without its folders, a Windows tool's
    backslashes read as separators too; "input" where no name is left ("." or "..", a
    damaged or crafted archive: round review96, verify stopped with a traceback)."""
    name = member.replace("\\", "/").rstrip("/").rsplit("/", 1)[-1]
    return name if name not in ("", ".", "..") else "input"


def _zipped_beside(path: Path, sha, scratch: Path, number: int):
    """(the zip archive, the recorded bytes restored from it) where the recorded input
    `path` is gone and a zip archive beside it (:func:`_zip_names`) holds one file, of any
    name, or a file of its name among others (:func:`_zip_candidates`), whose bytes, as
    they are or re-saved, have the recorded SHA-256
    (:func:`_zip_restored`); else None (round faults49: ``zip -m`` of the input after the
    run had been "does not exist; give --input", though ``run`` reads such a zip).

    References
    ----------
    PKWARE. APPNOTE.TXT: .ZIP File Format Specification (m); Python documentation,
    ``zipfile``.
    """
    for archive in _zip_names(path):
        # the recorded SHA-256 decides, not the member's name (round review96: a zip
        # holding "tower_2021.csv" or a Windows tool's "data\\tower.csv" for the gone
        # "tower.csv" was not opened, and then said not to hold its bytes)
        for member in _zip_candidates(archive, path.name) if archive.is_file() else ():
            restored = _zip_restored(archive, member, sha, scratch, number)
            if restored is not None:
                return archive, restored
    return None


#: Compressions a user may apply to an input after the run that neither ``run`` nor
#: ``verify`` unpacks, by their tool's suffix: the tool named and its command to unpack
#: (zstd, lz4, 7-Zip, RAR, Unix compress; their manual pages (m)).
UNREAD_PACKINGS = {".zst": ("zstd", "zstd -d"), ".lz4": ("lz4", "lz4 -d"),
                   ".7z": ("7-Zip", "7z x"), ".rar": ("RAR", "unrar x"),
                   ".Z": ("compress", "uncompress")}


def _packed_unread(path: Path) -> str:
    """"; NAME.zst beside it is compressed with zstd, which ..." for the files beside the
    gone input `path` packed in a format verify does not unpack (:data:`UNREAD_PACKINGS`),
    or "" (round faults49: "does not exist" alone, the packed file in sight)."""
    said = []
    for suffix, (tool, command) in UNREAD_PACKINGS.items():
        for packed in dict.fromkeys((path.with_name(path.name + suffix),
                                     path.with_name(path.stem + suffix))):
            if packed.is_file():
                said.append(f"{packed.name!r} beside it is compressed with {tool}, which "
                            f"fluxpart does not unpack: unpack it ({command} "
                            f"{packed.name}) and verify again")
    return "".join(f"; {line}" for line in said)


def _packed_not_taken(path) -> str:
    """"; NAME.gz beside it does not hold ..." naming the compressed files beside the gone
    input `path` that :func:`_packed_beside` did not take (other bytes, damaged, or past
    `MOST_UNPACKED_BYTES`), or "": "does not exist" alone sent the auditor looking for
    a file that was there (round review83)."""
    if path is None:
        return ""
    beside = [path.name + suffix for _, suffix in PACKED_FORMS
              if path.with_name(path.name + suffix).is_file()]
    beside += [archive.name for archive in _zip_names(path) if archive.is_file()
               and (_zip_files(archive) is None or _zip_candidates(archive, path.name))]
    others = "".join(
        f"; {archive.name!r} beside it holds {len(files)} files, none named {path.name!r}"
        for archive in _zip_names(path) if archive.is_file()
        and (files := _zip_files(archive)) is not None
        and not _zip_candidates(archive, path.name))
    if not beside:
        return _packed_unread(path) + others
    return _packed_unread(path) + others + (
            f"; {', '.join(map(repr, beside))} beside it does not hold its recorded bytes "
            f"(its unpacked bytes, re-saved or not, do not have the recorded SHA-256, or it "
            f"is damaged or unpacks to more than {MOST_UNPACKED_BYTES >> 30} GiB)")


def _restored_copy(data: bytes, name: str, scratch: Path, number: int) -> Path:
    """Write the recorded bytes `data` as `name` in a folder of its own in `scratch`."""
    folder = scratch / f"restored-input-{number}"
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / name
    target.write_bytes(data)
    return target
