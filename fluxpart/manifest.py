"""The manifest of a result folder: what was computed, from what, by which code, on what.

``manifest.json`` records what an auditor needs to rerun and compare a result:

- ``site``, the full resolved settings ``config`` (seed included) and ``seed``;
- ``provenance``: the input file(s) and the site config with their SHA-256 and
  their paths *relative to the result folder* (so a bundle of result, input and
  config can move as a whole), the site config's full text (its ``[input]``
  table says how the input was read), the reader's record and the screening
  thresholds; a message (warning, reader note) names such a file by that relative
  path too, not by the path the run was given;
- ``versions`` of Python and the libraries that shape the numbers, ``code`` (a
  fingerprint of the package's own source, :func:`fluxpart.fingerprint.code_fingerprint`)
  and ``platform`` (CPU features and BLAS, :func:`fluxpart.fingerprint.platform_record`);
- ``warnings``, the ``caution``, and the SHA-256, row count and columns of every table;
- ``unhashed``: files and folders the folder may hold that the manifest does not
  hash, because they must be free to differ: the run log (who, when, where,
  command line) and the report pages derived from the tables;
- ``seal``: the SHA-256 of the manifest's own content without the seal.

The seal makes an edit of the manifest visible (a changed site name, setting,
caution or reader record no longer matches the seal). It is an integrity check,
not a signature: whoever recomputes it after editing defeats it, and it is the
recomputation by ``fluxpart verify`` that catches such edits. The manifest holds
no wall-clock time, user or host name (those are in the run log), so the same
input, settings, code and machine give the same manifest.

This module knows nothing of the pipeline: it turns table entries and metadata
into a manifest and reads one back.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import platform
import re
import unicodedata
from pathlib import Path

from .errors import InputFileError

__all__ = ["CAUTION", "MANIFEST_FILE", "MANIFEST_FORMAT", "REPORT_FOLDER", "RUN_LOG",
           "build_manifest", "escaped_paths", "library_versions", "lost_manifest_remedy",
           "manifest_seal", "manifest_text", "result_files_without_manifest",
           "newer_format_reason", "path_entries",
           "name_in_other_case",
           "QUOTED_TEXT", "portable_messages", "portable_provenance", "read_manifest",
           "recorded_path", "recorded_paths", "result_links",
           "seal_intact", "shown_name", "undecodable_message", "undecodable_paths",
           "without_paths"]

MANIFEST_FORMAT = "fluxpart-result/2"
MANIFEST_FILE = "manifest.json"
#: The run log: who, when, where and the command line; listed, never hashed.
RUN_LOG = "run-log.json"
#: The folder of report pages (``fluxpart report``); listed, never hashed.
REPORT_FOLDER = "report"

#: The caution carried by every manifest, CLI budget and report.
CAUTION = (
    "A tower budget is one line of evidence for carbon-credit quantification, not a certified "
    "credit. Whether and how it may be used is decided by the applicable crediting methodology "
    "and by accredited verification."
)

#: What NEE leaves out, said beside every net uptake a reader may take for stored carbon
#: (the command line's tonnes, the report's summary; not written into a manifest, whose
#: caution stays as results were sealed with it): the tower sees the CO2 exchanged with
#: the air above the canopy only; the ecosystem's carbon balance adds the carbon moved
#: otherwise (net ecosystem carbon balance; Chapin et al. 2006, Ecosystems 9:1041-1050 (m)).
#: A maize field's 18 t CO2 ha-1 of net uptake leaves largely with its harvest.
NEE_SCOPE = ("NEE counts only the CO2 exchanged with the air above the canopy: carbon removed "
             "by a harvest or grazing, brought in as manure, or lost as methane or in water "
             "is not in it, so a net uptake alone is not the carbon the ecosystem stored")
#: The tonnes' caution where an export describes them (the CSVW column description of
#: ``net_uptake_t_co2_per_ha``, the NetCDF file's comment): what the report's summary and
#: the command line say beside the tonnes (leftovers57). Added by the exports only, not
#: to the Parquet field's description, so the annual table keeps its bytes.
TONNES_CAUTION = (f"{NEE_SCOPE}. Tonnes of CO2 taken up are not by themselves carbon "
                  "stored, nor a credited removal: the applicable crediting methodology and "
                  "accredited verification decide how they may be used")

_LIBRARIES = ("fluxpart", "numpy", "pandas", "scipy", "statsmodels", "pyarrow")
_UNHASHED = {
    RUN_LOG: "who ran it, when, where and with which command line; free to differ between "
             "runs, so not hashed",
    f"{REPORT_FOLDER}/": "report pages drawn from the tables by `fluxpart report`; derived, "
                         "not hashed",
}


def library_versions() -> dict[str, str]:
    """Return the versions of Python and of the libraries that shape the numbers.

    fluxpart's own is the running code's ``__version__``: the installed distribution's
    metadata is written at install time, so an editable install keeps the version it was
    installed at while the code moves on.
    """
    from importlib import metadata  # here: every command imports this module, few write

    from . import __version__

    versions = {"python": platform.python_version()}
    for name in _LIBRARIES:
        if name == "fluxpart":
            versions[name] = __version__
            continue
        try:
            versions[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            versions[name] = "not installed"
    return versions


def _jsonable(value):
    return json.loads(json.dumps(value, default=str))


def _whole_numbers_as_integers(value):
    """`value` with every finite float that is a whole number as an int, at any depth."""
    if isinstance(value, float) and math.isfinite(value) and value.is_integer():
        return int(value)
    if isinstance(value, dict):
        return {key: _whole_numbers_as_integers(item) for key, item in value.items()}
    if isinstance(value, list):
        return [_whole_numbers_as_integers(item) for item in value]
    return value


def _content_sha256(manifest: dict, *, whole_numbers: bool) -> str:
    content = {key: value for key, value in manifest.items() if key != "seal"}
    if whole_numbers:
        content = _whole_numbers_as_integers(content)
    text = json.dumps(content, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def manifest_seal(manifest: dict) -> str:
    """Return the SHA-256 of the manifest's content without its ``seal`` entry.

    The content is serialised canonically (sorted keys, no whitespace, and, since
    faults19, every whole number written as an integer: ``250.0`` as ``250``), so
    re-indenting the file, also with a tool that writes numbers its own way (``jq``,
    JavaScript's ``JSON.stringify`` drop the ``.0``), does not change the seal, but
    changing any value does.
    """
    return _content_sha256(manifest, whole_numbers=True)


def seal_intact(manifest: dict) -> bool:
    """True when the manifest's ``seal`` matches its content.

    A seal of fluxpart 0.20.0 or earlier, computed with whole floats as written
    (``250.0``), is accepted as well (such a manifest re-indented by ``jq`` still fails).
    """
    seal = manifest.get("seal")
    return seal == manifest_seal(manifest) or seal == _content_sha256(manifest,
                                                                      whole_numbers=False)


def _relative(path_text, directory: Path):
    """`path_text` relative to `directory` where possible (POSIX separators)."""
    if not isinstance(path_text, str) or not path_text:
        return path_text
    path = Path(path_text)
    if not path.is_absolute():
        return path.as_posix()
    try:
        return Path(os.path.relpath(path, directory)).as_posix()
    except ValueError:  # another drive on Windows: no relative path exists
        return path.as_posix()


def portable_provenance(provenance: dict, directory) -> dict:
    """Return `provenance` with the input and site config paths relative to `directory`.

    Parameters
    ----------
    provenance : dict
        As carried by a result (absolute paths from :func:`fluxpart.process_site_config`).
    directory : path-like
        The result folder's final place (absolute).

    Returns
    -------
    dict
        A copy in which the ``input`` and ``site_config`` entries (and each of
        several input ``files``) hold paths relative to `directory`.
    """
    directory = Path(os.path.abspath(directory))
    out = _jsonable(provenance)
    reader = out.get("reader")
    for key in ("warnings", "notes"):
        if isinstance(reader, dict) and isinstance(reader.get(key), list):
            reader[key] = portable_messages(reader[key], provenance, directory)
    for entry in path_entries(out):
        entry["path"] = _relative(entry["path"], directory)
    return out


#: A quoted part of a message: ``'...'`` or ``"..."`` (as :func:`repr` quotes a path,
#: with " where the text holds a ').
QUOTED_TEXT = re.compile(r"'([^']*)'|\"([^\"]*)\"")


def portable_messages(texts, provenance: dict, directory) -> list:
    """`texts` (a run's messages) with each quoted path that names a recorded input file
    or site config written as the manifest records that file: relative to `directory`.

    A message names the input by the path the run was given (``'site/flux.csv'`` from
    the folder it ran in, or a whole path), which says where the run was started, not
    where the file lies beside the result; the manifest records paths relative to the
    result folder, so a bundle moved as a whole keeps its record. A quoted part is
    changed only where it leads to the file a recorded path names (the same real path,
    resolved from the current folder as the run resolved it); any other text is kept.

    Parameters
    ----------
    texts : sequence of str
        Messages (warnings, reader notes); an item that is no string is kept.
    provenance : dict
        As carried by a result, the recorded paths absolute
        (:func:`fluxpart.process_site_config`).
    directory : path-like
        The result folder's final place.

    Returns
    -------
    list
        The messages, paths naming a recorded file relative to `directory` (POSIX
        separators).
    """
    directory = Path(os.path.abspath(directory))
    places = {}
    for entry in path_entries(_jsonable(provenance)):
        recorded = entry["path"]
        if isinstance(recorded, str) and recorded and Path(recorded).is_absolute():
            places[os.path.realpath(recorded)] = _relative(recorded, directory)
    names = {Path(place).name for place in places}

    def portable(match):
        quoted = match.group(1) if match.group(1) is not None else match.group(2)
        if not quoted or re.split(r"[\\/]", quoted)[-1] not in names:
            return match.group(0)
        try:
            relative = places.get(os.path.realpath(quoted))
        except (OSError, ValueError):     # a NUL character: no path
            return match.group(0)
        if relative is None or relative == quoted:
            return match.group(0)
        return repr(relative) if match.group(1) is not None else f'"{relative}"'

    return [QUOTED_TEXT.sub(portable, text) if isinstance(text, str) else text for text in texts]


def path_entries(provenance: dict) -> list[dict]:
    """The dicts with a ``path`` among the input and site config records (files of several too)."""
    found = []
    for key in ("input", "site_config"):
        entries = provenance.get(key)
        for entry in entries if isinstance(entries, list) else [entries]:
            if isinstance(entry, dict):
                found += [entry] if "path" in entry else []
                found += [f for f in entry.get("files") or [] if isinstance(f, dict)
                          and "path" in f]
    return found


def shown_name(text: str) -> str:
    """`text` (a path from the operating system) with each byte that is not UTF-8 shown as
    ``\\xNN``: Python carries such bytes of a file name as lone surrogates
    (``surrogateescape``), which no UTF-8 file can hold."""
    return text.encode("utf-8", "surrogateescape").decode("utf-8", "backslashreplace")


def shown_path(path) -> str:
    """A path as a command's output shows it: as it is, or quoted where it is ambiguous.

    A folder name may hold a line break, a tab or an escape sequence (or bytes that are
    not UTF-8, kept as lone surrogates and shown as ``\\xNN``): printed as it is, a
    reader or a log parser sees two lines, or the terminal is rewritten. Such a path is
    shown ``repr``-quoted, its control characters as Python's escapes, so that each item
    stays on one line and the name can be told exactly; any other path is shown as it
    is (round faults37).

    Parameters
    ----------
    path : str or os.PathLike
        The path (relative or absolute, as the user gave it).

    Returns
    -------
    str
        The path (bytes that are not UTF-8 as ``\\xNN``, :func:`shown_name`) where
        every character is printable, else its ``repr``.

    References
    ----------
    Python documentation, ``str.isprintable`` and ``repr`` of a str (m); POSIX.1-2017,
    3.170 Filename: any byte but ``/`` and NUL (m).
    """
    text = shown_name(str(path))
    return text if text.isprintable() else repr(text)


def undecodable_paths(provenance: dict, directory) -> list[str]:
    """The recorded paths of `provenance` that a manifest cannot hold, shown readably.

    A name made on a system with another code page (a latin-1 or cp1252 share, an archive
    unpacked without converting its names) reaches Python with its bytes that are not UTF-8
    as lone surrogates; the manifest is UTF-8 JSON, and writing it failed with a
    UnicodeEncodeError traceback after the whole run had been computed. Only the paths as
    recorded (relative to the result folder `directory`, :func:`portable_provenance`)
    count: a parent folder of both the result and the input does not appear in them.
    """
    found = []
    for entry in path_entries(portable_provenance(provenance, directory)):
        path = entry.get("path")
        if isinstance(path, str) and path != shown_name(path):
            found.append(shown_name(path))
    return found


def escaped_paths(provenance: dict) -> dict:
    """A copy of `provenance` whose recorded paths show bytes that are not UTF-8 as
    ``\\xNN`` (:func:`shown_name`): for a scratch copy of a result whose paths are never
    compared (verify's rerun from an input given in such a folder)."""
    out = _jsonable(provenance)
    for entry in path_entries(out):
        if isinstance(entry.get("path"), str):
            entry["path"] = shown_name(entry["path"])
    return out


def undecodable_message(shown: str) -> str:
    """The refusal of a path whose name is not UTF-8 (shown by :func:`shown_name`)."""
    return (f"the path {shown!r} holds a name that is not UTF-8 text (the bytes shown as \\x..: "
            "a name made on a system with another code page, or unpacked from an archive "
            "without converting it); a result records its input and site config paths as "
            "UTF-8 text, so rename that folder or file to UTF-8 (e.g. with convmv) and run "
            "again")


def without_paths(provenance: dict) -> dict:
    """A copy of `provenance` without the recorded paths (which differ between places)."""
    out = _jsonable(provenance)
    for entry in path_entries(out):
        entry.pop("path")
    return out


def recorded_path(directory, entry: dict) -> Path | None:
    """Where a recorded ``path`` (relative to the result folder) points now, or None.

    The path is taken from the folder as spelled (``..`` removed by name, as it was
    recorded); where nothing is there, from the folder's real place: a folder reached
    through a symbolic link (``latest -> runs/2021/out``) has another parent than the
    link's, and ``..`` leads to the real one (POSIX path resolution). A name with accented
    letters is also looked for in its other Unicode normal form: macOS (HFS+) stores names
    decomposed (NFD), so a bundle copied through a Mac holds ``grün.csv`` as other bytes
    than those recorded (Unicode Standard Annex #15).
    """
    text = entry.get("path") if isinstance(entry, dict) else None
    if not isinstance(text, str) or not text:
        return None
    path = Path(text)
    if path.is_absolute():
        return path
    spelled = Path(os.path.abspath(Path(directory) / path))
    places = (Path(directory), Path(os.path.realpath(directory)))
    for form in (text, *(unicodedata.normalize(f, text) for f in ("NFC", "NFD"))):
        for place in places:
            found = Path(os.path.abspath(place / form))
            if found.exists():
                return found
    return spelled


def recorded_paths(provenance: dict, directory) -> list[Path]:
    """Where every recorded input file and site config points now.

    Parameters
    ----------
    provenance : dict
        A result's provenance (the manifest's, with paths relative to the result
        folder, or a computed result's, with absolute paths).
    directory : path-like
        The result folder, which relative paths are taken from.

    Returns
    -------
    list of pathlib.Path
        Absolute paths, the input file(s) first; entries without a path are left out.
    """
    found = (recorded_path(directory, entry) for entry in path_entries(provenance))
    return [path for path in found if path is not None]


def build_manifest(tables: dict, *, site: dict, config: dict, seed, provenance: dict,
                   warnings, versions: dict, code: dict, platform_facts: dict,
                   directory) -> dict:
    """Assemble the manifest of a result folder and seal it.

    Parameters
    ----------
    tables : dict
        Table name -> ``{"file", "sha256", "rows", "columns"}``.
    site, config : dict
        The site and the resolved settings (``Site.to_dict()``, ``Config.to_dict()``).
    seed : int
        The random seed used.
    provenance : dict
        Input and site config records, reader record, screening thresholds;
        paths are made relative to `directory` (:func:`portable_provenance`).
    warnings : sequence of str
        Warnings of the run; a quoted path naming a recorded file is made relative to
        `directory` (:func:`portable_messages`), as in the reader's warnings and notes.
    versions, code, platform_facts : dict
        :func:`library_versions`, :func:`fluxpart.fingerprint.code_fingerprint`,
        :func:`fluxpart.fingerprint.platform_record`.
    directory : path-like
        The folder's final place, to which recorded paths are made relative.

    Returns
    -------
    dict
        The manifest, with its ``seal``.
    """
    manifest = {
        "format": MANIFEST_FORMAT,
        "caution": CAUTION,
        "site": _jsonable(site),
        "config": _jsonable(config),
        "seed": seed,
        "provenance": portable_provenance(provenance, directory),
        "versions": dict(versions),
        "code": dict(code),
        "platform": _jsonable(platform_facts),
        "warnings": portable_messages(list(warnings), provenance, directory),
        "tables": _jsonable(tables),
        "unhashed": dict(_UNHASHED),
    }
    manifest["seal"] = manifest_seal(manifest)
    return manifest


def newer_format_reason(manifest: dict) -> str | None:
    """Why this fluxpart cannot judge a result of a newer release's format, or None.

    A result folder of a later release whose manifest format is newer (``/3`` where this
    code reads ``/2``) was reported as not matching its manifest, with the advice to
    "rerun to rewrite the folder", and ``verify`` called it NOT reproduced (exit 1): an
    auditor with an older install read a verdict on a result its code cannot read, and
    was told to replace that result with an older release's.

    Parameters
    ----------
    manifest : dict
        A parsed ``manifest.json``.

    Returns
    -------
    str or None
        Naming the release and format that wrote it, the format read here and the fix;
        None for this format, an older one or an unrecognised one (those keep their
        own message).

    References
    ----------
    Semantic Versioning 2.0.0, items 7-8: a format a later release changed cannot be
    read by an earlier one (m); common practice: a reader refuses a file format version
    newer than its own rather than guessing (HDF5, Parquet "format version" fields (m)).
    """
    from . import __version__

    recorded = manifest.get("format")
    ours = MANIFEST_FORMAT.rpartition("/")
    if not isinstance(recorded, str) or not recorded.startswith(ours[0] + "/"):
        return None
    number = recorded.rpartition("/")[2]
    if not number.isdigit() or int(number) <= int(ours[2]):
        return None
    code = manifest.get("code") if isinstance(manifest.get("code"), dict) else {}
    writer = f"fluxpart {code['version']}" if isinstance(code.get("version"), str) else (
        "a newer fluxpart")
    return (f"was written by {writer} in format {recorded!r}, newer than the "
            f"{MANIFEST_FORMAT!r} this fluxpart {__version__} reads: read or verify it with "
            "that release or a later one (a run into it with this one would replace it "
            "with an older release's result)")


def manifest_bytes(manifest: dict) -> bytes:
    """The text of ``manifest.json``: indented, sorted keys, UTF-8, final newline."""
    return (json.dumps(manifest, indent=2, sort_keys=True, ensure_ascii=False) + "\n").encode()


def manifest_text(data: bytes) -> str:
    """The text of a ``manifest.json`` read as `data`, in whichever Unicode encoding it is.

    fluxpart writes UTF-8 (:func:`manifest_bytes`). A byte-order mark an editor added on
    saving (Windows Notepad) is no content, as re-indenting is none; nor is re-encoding
    as UTF-16 or UTF-32 (Notepad's "Unicode", the ``>`` redirection and ``Out-File`` of
    Windows PowerShell 5.1 write UTF-16 LE with a mark): the seal covers the parsed
    content. The encoding is told from the first bytes as RFC 4627 section 3 lays down
    (:func:`json.detect_encoding`); a legacy 8-bit code page raises UnicodeDecodeError.

    References
    ----------
    Crockford, D. (2006). RFC 4627: The application/json media type, section 3
    (encoding detected from the first four octets).
    """
    return data.decode(json.detect_encoding(data))


def read_manifest(directory) -> dict:
    """Return the parsed ``manifest.json`` of a result folder (no integrity check).

    Use :func:`fluxpart.resultdir.read_folder` to also check the seal and every file.
    """
    try:
        return _read_manifest(Path(directory))
    except OSError as error:            # no permission on the folder or the file
        from .store import unreadable

        raise unreadable(error.filename or directory, error) from None


def recorded_inputs(manifest: dict) -> tuple:
    """The input file(s) a manifest records, in order: ``(path, sha256)`` pairs, the path
    as recorded (relative to the result folder); empty for a demo or ``Result.write``
    folder, or a manifest without the record.

    Parameters
    ----------
    manifest : dict
        A parsed ``manifest.json`` (:func:`read_manifest`).

    Returns
    -------
    tuple of (str, str)
    """
    recorded = ((manifest.get("provenance") or {}).get("input")
                if isinstance(manifest, dict) else None)
    if not isinstance(recorded, dict):
        return ()
    parts = recorded.get("files") if isinstance(recorded.get("files"), list) else [recorded]
    return tuple((str(part.get("path")), str(part.get("sha256"))) for part in parts
                 if isinstance(part, dict))


def result_links(manifest: dict) -> dict:
    """What ties a file derived from a result folder (a NetCDF or CSV export) to that
    folder's result: the manifest's seal, the seed, each input file's and the site
    config's SHA-256 and the code fingerprint, as the manifest records them.

    An export named the release alone, so an auditor holding one could not tell which
    result, input bytes or seed its numbers came from (auditor53).

    Parameters
    ----------
    manifest : dict
        The exported folder's ``manifest.json`` as :func:`read_manifest` parses it.

    Returns
    -------
    dict of str to str or int
        ``manifest_seal``, ``seed``, ``input_sha256`` (one hash per input file, in the
        recorded order, separated by a space), ``site_config_sha256`` and
        ``code_sha256``; a fact not recorded, or not of the type the manifest writes,
        is left out (a demo or ``Result.write`` folder records no input file).

    References
    ----------
    Eaton, B. et al. (2022). NetCDF Climate and Forecast (CF) Metadata Conventions,
    version 1.10, section 2.6.2 (``history``: an audit trail of the data's processing).
    """
    if not isinstance(manifest, dict):
        return {}
    links = {}
    if isinstance(manifest.get("seal"), str):
        links["manifest_seal"] = manifest["seal"]
    if isinstance(manifest.get("seed"), int) and not isinstance(manifest["seed"], bool):
        links["seed"] = manifest["seed"]
    inputs = [sha for _, sha in recorded_inputs(manifest) if sha != "None"]
    if inputs:
        links["input_sha256"] = " ".join(inputs)
    provenance = manifest.get("provenance") if isinstance(manifest.get("provenance"),
                                                          dict) else {}
    config = provenance.get("site_config")
    if isinstance(config, dict) and isinstance(config.get("sha256"), str):
        links["site_config_sha256"] = config["sha256"]
    code = manifest.get("code")
    if isinstance(code, dict) and isinstance(code.get("sha256"), str):
        links["code_sha256"] = code["sha256"]
    return links


#: The name of a writer's staging folder beside its output NAME (``.NAME.staging-`` and
#: 8 characters: :func:`tempfile.mkdtemp`'s before round faults49, eight hex digits since,
#: :func:`fluxpart.resultdir.make_staging`).
_STAGING_NAME = re.compile(r"^\.(.+)\.staging-[a-z0-9_]{8}$")


def result_files_without_manifest(directory: Path) -> list[str]:
    """The names of a result's files in `directory` where it has no manifest.json but
    holds a run's run log, or its time series and annual tables (the manifest deleted by
    a tidy-up of JSON files, or left out of a copy); ``[]`` otherwise or where the folder
    cannot be listed.

    Such a folder is a result that lost its seal: "not a fluxpart result folder" (verify,
    report, export) and "holds other files ... it is not a fluxpart result folder" (run)
    hid that (round faults47).

    Parameters
    ----------
    directory : path-like
        The folder given as a result.

    Returns
    -------
    list of str
        The run log's and the Parquet tables' names in it, sorted; ``[]`` where it holds
        a manifest.json, neither a run log nor both the time series and annual tables, or
        cannot be listed.
    """
    directory = Path(directory)
    try:
        if (directory / MANIFEST_FILE).exists():
            return []
        names = sorted(p.name for p in directory.iterdir() if p.is_file()
                       and (p.name == RUN_LOG or p.suffix == ".parquet"))
    except OSError:
        return []
    if RUN_LOG in names or {"annual.parquet", "timeseries.parquet"} <= set(names):
        return names
    return []


def _same_place(recorded: str, directory: Path) -> bool:
    """Whether the folder a run log `recorded` is `directory`, its links and ``..``
    resolved (``verify r/../r`` named r itself as "the folder the run wrote")."""
    try:
        return os.path.realpath(recorded) == os.path.realpath(directory)
    except (OSError, ValueError):
        return Path(recorded) == Path(directory).absolute()


def lost_manifest_remedy(directory: Path) -> str:
    """"put manifest.json back from a copy of the result", naming the folder the run
    wrote where the run log of `directory` names another one (where a copy may be), for a
    result folder whose manifest is gone (:func:`result_files_without_manifest`).

    Parameters
    ----------
    directory : path-like
        The result folder whose manifest.json is gone.

    Returns
    -------
    str
        The remedy, to follow a colon in a message; the run log's folder is named only
        where it is another folder, links and ``..`` resolved (an unreadable or damaged
        run log names none).
    """
    wrote = None
    try:
        log = json.loads((Path(directory) / RUN_LOG).read_text(encoding="utf-8"))
        wrote = log.get("result_folder") if isinstance(log, dict) else None
    except (OSError, ValueError):
        pass
    where = (f" (its run log says the run wrote {wrote!r})"
             if isinstance(wrote, str) and not _same_place(wrote, directory) else "")
    return f"put {MANIFEST_FILE} back from a copy of the result{where}"


def _nearby_result(directory: Path) -> str:
    """A hint naming the result folder next to `directory`: the one whose report page
    folder it is (``out/report``), or the one folder it holds (a bundle of input, site
    config and ``out/``); empty where there is none."""
    if (directory / "report.html").is_file() and (directory.parent / MANIFEST_FILE).is_file():
        return (f"; it is the report page folder of the result folder "
                f"{str(directory.parent)!r}: give that folder")
    staged = _STAGING_NAME.match(directory.name)
    if staged:
        # what a run or report stopped outright (kill -9, a power cut) left, seen with
        # `ls -a`: "not a fluxpart result folder" did not say where the result is (faults42)
        return (f"; it is the unfinished folder a stopped fluxpart command (run, report) left "
                f"while writing {str(directory.parent / staged.group(1))!r}, not a result: "
                "give that folder; the next command writing it removes this one")
    lost = result_files_without_manifest(directory)
    if lost:
        shown = ", ".join(lost[:3]) + (", ..." if len(lost) > 3 else "")
        return (f"; it holds a result's files ({shown}) but its manifest.json is gone "
                f"(deleted, or left out of a copy?), and without it nothing in it can be "
                f"verified or read as a result: {lost_manifest_remedy(directory)}, or run "
                "again into a new folder")
    try:
        held = sorted(p for p in directory.iterdir() if (p / MANIFEST_FILE).is_file())
    except OSError:
        return ""
    if len(held) == 1:
        return f"; it holds the result folder {str(held[0])!r}: give that folder"
    if held:
        # a batch stopped (SIGTERM, Ctrl-C, kill -9) before it first sealed its network
        # tables leaves site folders and no network.json; verify said only "not a fluxpart
        # result folder" (network56)
        return (f"; it holds {len(held)} result folders ({str(held[0].name)!r}, ...): give "
                "one of them, or, where it is a `fluxpart batch` output folder, run the "
                "batch again: a batch stopped before it wrote its network.json leaves no "
                "network to verify")
    return ""


def _unreadable_why(error: Exception) -> str:
    """What made valid-looking JSON unreadable: nesting too deep or a number too long.

    References
    ----------
    Python documentation, ``sys.set_int_max_str_digits`` (the 4300-digit default limit
    on converting text to int, CVE-2020-10735) and ``json`` (the decoder recurses per
    level of nesting) (m).
    """
    if isinstance(error, RecursionError):
        return "arrays or objects nested too deep to read"
    return f"a value cannot be read: {str(error).split(';')[0]}"


#: Leading bytes of the archives a result folder is sent or kept in: zip (PKWARE
#: APPNOTE 4.3.7, local file header "PK\x03\x04"; "PK\x05\x06" of an empty one), 7z,
#: and the compressors a tar archive is put through (gzip RFC 1952, bzip2, xz, zstd
#: RFC 8878) (m).
_ARCHIVE_MAGIC = ((b"PK\x03\x04", "zip"), (b"PK\x05\x06", "zip"),
                  (b"7z\xbc\xaf\x27\x1c", "7z"), (b"\x1f\x8b", "gzip-compressed (.tar.gz?)"),
                  (b"BZh", "bzip2-compressed (.tar.bz2?)"),
                  (b"\xfd7zXZ\x00", "xz-compressed (.tar.xz?)"),
                  (b"\x28\xb5\x2f\xfd", "zstd-compressed (.tar.zst?)"))


def archive_kind(path: Path) -> str:
    """The kind of archive the file `path` is, told from its first bytes, or ``""``.

    A result folder is commonly handed on packed (zip, tar); given packed to ``verify``,
    ``report`` or ``export`` it was called "a file, not a result folder", which did not
    say what to do with it.

    Parameters
    ----------
    path : pathlib.Path
        A file given where a result folder belongs.

    Returns
    -------
    str
        ``"zip"``, ``"tar"``, ``"7z"``, a compressed kind, or ``""`` (not an archive or
        not readable).

    References
    ----------
    PKWARE (2020). APPNOTE.TXT - .ZIP File Format Specification, 6.3.9, section 4.3.7;
    IEEE Std 1003.1 (POSIX), pax / ustar format: "ustar" at byte offset 257 (m).
    """
    try:
        with open(path, "rb") as handle:
            head = handle.read(512)
    except OSError:
        return ""
    if head[257:262] == b"ustar":
        return "tar"
    return next((kind for magic, kind in _ARCHIVE_MAGIC if head.startswith(magic)), "")


class _RepeatedKey(ValueError):
    """A key given twice in one JSON object of a manifest."""


def _once_each(pairs: list) -> dict:
    """``object_pairs_hook`` of :func:`json.loads`: the object, refusing a repeated key."""
    seen = {}
    for key, value in pairs:
        if key in seen:
            raise _RepeatedKey(key)
        seen[key] = value
    return seen


def name_in_other_case(directory: Path, name: str) -> str | None:
    """The entry of `directory` whose name equals `name` but for case, or None."""
    try:
        return next((entry.name for entry in directory.iterdir()
                     if entry.name != name and entry.name.casefold() == name.casefold()), None)
    except OSError:
        return None


def _read_manifest(directory: Path) -> dict:
    path = directory / MANIFEST_FILE
    if not Path(directory).exists():
        from ._validate import unicode_form_hint

        # a result folder copied through a Mac keeps an accented name decomposed (NFD):
        # "does not exist" beside a folder that looks the same in every listing
        other_form = unicode_form_hint(directory)
        raise InputFileError(f"the result folder {str(directory)!r} does not exist"
                             + (other_form or ": give the folder that fluxpart run or batch "
                                "wrote (its --out)"))
    if not Path(directory).is_dir():
        from .store import special_kind

        special = special_kind(directory)
        if special:
            # read for an archive's first bytes, a pipe nobody writes blocked without end
            raise InputFileError(f"{str(directory)!r} is {special}, not a result folder: "
                                 "give the folder that fluxpart run or batch wrote (its "
                                 "--out), unpacked where it was sent packed")
        packed = archive_kind(Path(directory))
        if packed:
            raise InputFileError(f"{str(directory)!r} is a {packed} archive, not a result "
                                 "folder: unpack it and give the result folder inside (the "
                                 "one holding manifest.json)")
        raise InputFileError(f"{str(directory)!r} is a file, not a result folder: give the "
                             "folder that fluxpart run or batch wrote (its --out)")
    if not path.is_file():
        other_case = name_in_other_case(Path(directory), MANIFEST_FILE)
        if path.exists() or path.is_symlink():
            raise InputFileError(f"{str(path)!r} is not a plain file (a folder, a pipe, a "
                                 "device or a dangling link): put the manifest.json the run "
                                 "wrote there")
        if other_case:
            # a copy through a tool or file system that changed the case of names (DOS
            # 8.3 names shown upper-case, some zip and FTP clients): the folder is a result
            # folder, and "not a fluxpart result folder" hid the one fix
            raise InputFileError(f"{str(path)!r} does not exist, but {other_case!r} does: the "
                                 "names in the folder changed case (copied by a tool or "
                                 "through a file system that does not keep case?); rename "
                                 "each file to the lower-case name the manifest lists")
        # a batch output folder holds result folders, sealed by network.json (batch.py)
        batch = ("; it is a batch output folder: give one site's folder in it "
                 f"({str(Path(directory) / '<site key>')!r}), or read its network tables "
                 "with fluxpart.batch.read_network" if (directory / "network.json").is_file()
                 else _nearby_result(Path(directory)))
        raise InputFileError(f"{str(path)!r} does not exist: {str(directory)!r} is not a "
                             f"fluxpart result folder{batch}")
    try:
        manifest = json.loads(manifest_text(path.read_bytes()), object_pairs_hook=_once_each)
    except UnicodeDecodeError as error:
        # an editor's save in a legacy code page (Windows "ANSI", latin-1) rewrote every
        # non-ASCII character of the manifest (the en dash of "Lloyd–Taylor", a site name)
        raise InputFileError(f"{str(path)!r} is not UTF-8 text ({error.reason} at byte "
                             f"{error.start}): it was re-saved in another encoding (an "
                             "editor's ANSI or latin-1), which changes its content; use the "
                             "manifest.json as written") from None
    except json.JSONDecodeError as error:
        raise InputFileError(f"{str(path)!r} is not valid JSON: {error}") from None
    except _RepeatedKey as repeated:
        # JSON readers keep the last of a repeated key and drop the others unseen, so a
        # second "despike_z" or "sha256" typed above the written one showed a reader of
        # the file a value that no check compared (the seal covers the parsed content)
        raise InputFileError(f"{str(path)!r} has the key {repeated.args[0]!r} twice in one "
                             "object: fluxpart writes each key once, so the file was edited "
                             "after it was written; use the manifest as written") from None
    except (RecursionError, ValueError) as error:
        # valid JSON no fluxpart writes: arrays or objects nested thousands deep (Python's
        # JSON reader recurses per level) or an integer of more than 4300 digits (Python
        # 3.11's limit on converting text to int): a RecursionError or ValueError traceback
        raise InputFileError(f"{str(path)!r} is not a manifest fluxpart writes ("
                             f"{_unreadable_why(error)}): it was edited or replaced after "
                             "it was written; use the manifest as written") from None
    if not isinstance(manifest, dict):
        raise InputFileError(f"{str(path)!r} is not a fluxpart manifest (not a JSON object)")
    return manifest
