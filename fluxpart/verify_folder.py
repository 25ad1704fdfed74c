"""Reading a result folder as ``fluxpart verify`` finds it, before anything is rerun.

The manifest, the folder's mismatches with it and the stored tables are read from one
state of the folder (:func:`_read_stored`); a table rewritten by another program is read
as pandas reads it (:func:`_rewritten_elsewhere`), an unlisted file that is the run's own
input named (:func:`_recorded_file_inside`). What the manifest records is stated
(:func:`result_identity`, :func:`recorded_facts`), the writing run's library versions,
code and platform set against this one's (:func:`_environment`), and the folder's trail
checked: a run log gone (:func:`_run_log_note`), a report page drawn from another result
(:func:`_page_of_other_result`), another run's manifest copied in
(:func:`replaced_manifest`). The folder is named as it is on disk, not by the way a user
reached it (:func:`resolved_folder`).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pandas as pd

from ._validate import printable_line
from .errors import FluxpartError, InputFileError
from .fingerprint import code_fingerprint, platform_differences, platform_record
from .manifest import (
    RUN_LOG,
    library_versions,
    newer_format_reason,
    read_manifest,
    shown_name,
)
from .store import file_sha256, read_table
from .verify_compare import Difference
from .verify_fields import _ENVIRONMENT_KEYS
from .verify_report import _MAY_DIFFER


def resolved_folder(directory) -> Path:
    """The result folder as verify names it: absolute, ``..`` and links of the folders
    above it resolved (`Path.resolve`), so that ``auditor/../usb/out`` is shown as
    ``/.../usb/out`` in the verdict and its notes.

    A folder that is itself a symbolic link keeps its own name (its parent resolved):
    an interrupted write leaves its retired and staging copies beside the name it was
    written to, and verify looks for them there. Nothing recorded in the folder is
    changed; recorded paths relative to the folder name the same files, since the
    operating system resolves ``..`` after the links before it (POSIX.1-2017, 4.13
    Pathname Resolution (m)).

    Parameters
    ----------
    directory : path-like
        The folder as given on the command line (it may be missing: a repair puts it
        back).

    Returns
    -------
    pathlib.Path
        The resolved path.

    References
    ----------
    Python documentation, ``pathlib.Path.resolve`` (non-strict) (m).
    """
    path = Path(directory).absolute()
    return path.parent.resolve() / path.name if path.is_symlink() else path.resolve()


def _read_run_log(directory: Path) -> dict | None:
    """The folder's run log (never hashed), or None where it is absent or unreadable."""
    try:
        record = json.loads((directory / RUN_LOG).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return record if isinstance(record, dict) else None


def replaced_manifest(differences, manifest: dict, recomputed: dict | None = None,
                      run_log: dict | None = None) -> str:
    """The evidence that a folder's manifest and its tables come from different runs.

    A table edited or replaced after the run changes its own SHA-256 only. Another run's
    ``manifest.json`` copied into the folder changes the SHA-256 recorded for every table
    that run computed otherwise: all of them where its input or seed differs in the
    data, the annual table alone where only the Monte Carlo draws differ (round faults35
    found the latter named as "annual.parquet changed after it was written"). Two facts
    tell the manifest apart: every table differing (one replaced file against every
    table edited), and the run log, written with the tables and never hashed, naming
    another site config or input file than the manifest records (by file name; a result
    moved since keeps its names). Where the recomputation reproduces, bit for bit, the
    SHA-256 the manifest records for each table, the manifest is the genuine record of
    its own input and settings, and the tables are another result's.

    Parameters
    ----------
    differences : sequence of Difference
        The folder's differences from its manifest (``kind == "hash"`` per table).
    manifest : dict
        The folder's manifest.
    recomputed : dict, optional
        The manifest of the recomputation, where there is one.
    run_log : dict, optional
        The folder's run log (``run-log.json``), where it is there and readable.

    Returns
    -------
    str
        The evidence, where a table differs from its recorded SHA-256 and either every
        one of two or more tables does or the run log names another file; empty
        otherwise.
    """
    tables = {name: entry for name, entry in (manifest.get("tables") or {}).items()
              if isinstance(entry, dict)}
    changed = {d.table for d in differences if d.kind == "hash"}
    if not changed:
        return ""
    evidence = []
    if len(tables) >= 2 and changed == set(tables):
        evidence.append(f"every one of its {len(tables)} tables differs from the SHA-256 "
                        "it records")
    logged = (run_log or {}).get("absolute_paths")
    provenance = manifest.get("provenance") or {}
    for key, what in (("site_config", "site config"), ("input", "input file")):
        entry = provenance.get(key)
        written = logged.get(key) if isinstance(logged, dict) else None
        recorded = entry.get("path") if isinstance(entry, dict) else None
        if isinstance(written, str) and isinstance(recorded, str) and \
                shown_name(Path(recorded).name) != Path(written).name:
            evidence.append(f"the run log written with the tables names the {what} "
                            f"{Path(written).name!r}, the manifest {Path(recorded).name!r}")
    if not evidence:
        return ""
    text = "; ".join(evidence)
    again = (recomputed or {}).get("tables") or {}
    if tables and all(isinstance(again.get(name), dict) and again[name].get("sha256")
                      == entry.get("sha256") for name, entry in tables.items()):
        text += ("; and its recorded input and settings reproduce exactly the SHA-256 it "
                 "records, so the manifest is its own run's record and the tables are "
                 "another result's")
    return text


def _environment(manifest: dict) -> tuple[list[str], bool]:
    """Version, code and platform differences; whether the code fingerprint changed.

    An entry that is not a JSON object (a hand-edited manifest, whose broken seal is
    already reported) counts as not recorded.
    """
    versions, code, platform = (manifest.get(key) if isinstance(manifest.get(key), dict)
                                else None for key in _ENVIRONMENT_KEYS)
    out = []
    current = library_versions()
    if versions is None:
        out.append("library versions are not recorded in the manifest")
    for name, recorded in sorted((versions or {}).items()):
        if current.get(name) == recorded:
            continue
        if name == "fluxpart":
            # another release may change a method: its numbers can move by any amount
            out.append(f"fluxpart {current.get(name)} is running, the result was written by "
                       f"fluxpart {recorded}; another release can change methods and "
                       "numbers by more than rounding (see its changelog)")
        else:
            out.append(f"{name} {current.get(name, 'not installed')} is installed, the result "
                       f"was written with {recorded}{_MAY_DIFFER}")
    code = code or {}
    now = code_fingerprint()
    code_changed = code.get("sha256") != now["sha256"] or code.get("version") != now["version"]
    if code_changed:
        out.append(f"code fingerprint differs: the result was written by fluxpart "
                   f"{code.get('version')} with code {str(code.get('sha256'))[:16]}..., this is "
                   f"fluxpart {now['version']} with code {now['sha256'][:16]}..."
                   # the verdict's "likely cause:" line names the code where values differ;
                   # this line said so of "any difference", also beside an edited input
                   # file from which nothing was recomputed (review49)
                   )
    differing = platform_differences(platform, platform_record())
    if differing:
        out.append("platform differs in " + "; ".join(differing))
    return out, code_changed


def result_identity(manifest: dict) -> str:
    """Which result a manifest describes, in one line: seed, input, site config, release.

    Parameters
    ----------
    manifest : dict
        A result folder's manifest (:func:`fluxpart.manifest.read_manifest`).

    Returns
    -------
    str
        For example ``seed 0; input tower.csv (sha256 a266f768b503...); site config
        site.toml (sha256 79a5889d4710...); written by fluxpart 0.12.0`` (``seed`` is
        the run's setting; a demo result adds ``the invented demo site (data seed 1,
        variant c3)``, the seed its data were drawn with); several input
        files are named by the first and their count, with the SHA-256 of their names and
        hashes (:meth:`fluxpart.io.SiteConfig.input_sha256`); parts not recorded are left
        out.
    """
    parts = []
    if "seed" in manifest:
        parts.append(f"seed {manifest['seed']}")
    provenance = manifest.get("provenance") if isinstance(manifest.get("provenance"), dict) \
        else {}
    if "demo" in provenance:
        # the data's own seed and variant (demo --seed): "seed 0" above is the run's
        # setting, which an auditor of a `demo --seed 1` folder read as the data's (review43)
        demo = provenance["demo"] if isinstance(provenance["demo"], dict) else {}
        drawn = ", ".join(f"{label} {demo[key]}" for key, label in
                          (("seed", "data seed"), ("variant", "variant")) if key in demo)
        parts.append("the invented demo site" + (f" ({drawn})" if drawn else ""))
    for key, label in (("input", "input"), ("site_config", "site config")):
        entry = provenance.get(key)
        if isinstance(entry, dict) and entry.get("sha256"):
            name = Path(str(entry.get("path", "?"))).name
            files = entry.get("files") if isinstance(entry.get("files"), list) else []
            names = [Path(str(f.get("path", ""))).name for f in files if isinstance(f, dict)]
            if len(set(names)) < len(names):
                # files of one name in several folders (a glob over year folders of
                # monthly files): the base name alone would not tell which is meant
                name = str(entry.get("path", "?"))
            if len(files) > 1:
                # the hash of several files is of their names and hashes, none file's own
                parts.append(f"{label} {name} and {len(files) - 1} more file(s) (sha256 of "
                             f"their names and hashes {str(entry['sha256'])[:12]}...)")
            else:
                parts.append(f"{label} {name} (sha256 {str(entry['sha256'])[:12]}...)")
    code = manifest.get("code") if isinstance(manifest.get("code"), dict) else {}
    if code.get("version"):
        parts.append(f"written by fluxpart {code['version']}")
    return printable_line("; ".join(parts))


def recorded_facts(manifest: dict) -> dict:
    """What :func:`result_identity` names, as fields with whole hashes (``verify --json``).

    Parameters
    ----------
    manifest : dict
        The manifest :func:`result_identity` reads.

    Returns
    -------
    dict
        ``seed``; ``input`` and ``site_config``, each ``{"path", "sha256"}`` as recorded
        (the path relative to the folder; an input of several files adds ``files``,
        each ``{"path", "sha256"}``, its ``sha256`` then being of their names and
        hashes); ``fluxpart`` (the release that wrote the result) and ``code_sha256``
        (its code fingerprint); a demo result adds ``demo``. Parts not recorded are
        left out, and so is a part of another type than the manifest writes (an edited
        manifest: the folder check names it).
    """
    facts = {}
    if isinstance(manifest.get("seed"), int):
        facts["seed"] = manifest["seed"]
    provenance = manifest.get("provenance") if isinstance(manifest.get("provenance"), dict) \
        else {}
    if isinstance(provenance.get("demo"), dict):
        facts["demo"] = provenance["demo"]
    for key in ("input", "site_config"):
        entry = provenance.get(key)
        if isinstance(entry, dict) and isinstance(entry.get("sha256"), str):
            facts[key] = {"path": str(entry.get("path", "")), "sha256": entry["sha256"]}
            files = entry.get("files")
            if key == "input" and isinstance(files, list):
                facts[key]["files"] = [{"path": str(f.get("path", "")),
                                        "sha256": str(f.get("sha256", ""))}
                                       for f in files if isinstance(f, dict)]
    code = manifest.get("code") if isinstance(manifest.get("code"), dict) else {}
    for key, name in (("version", "fluxpart"), ("sha256", "code_sha256")):
        if isinstance(code.get(key), str):
            facts[name] = code[key]
    return facts


def _rewritten_elsewhere(path: Path, index=None):
    """A stored table that is Parquet but lacks fluxpart's schema metadata, read as
    pandas reads it (its own metadata restores an index it wrote), or None; the
    manifest's index column `index`, where read back as a plain column, made the index
    again (a frame read without fluxpart and written with pandas' default index).

    Such a file was read back and written again by another program with its values (a
    spreadsheet tool, ``pandas.DataFrame.to_parquet``): verify said only that it was
    unreadable, not whether its numbers changed.
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    from .store import _SCHEMA_KEY, arrow_table, parquet_source

    try:
        with parquet_source(path) as source:
            if _SCHEMA_KEY in (pq.read_schema(source).metadata or {}):
                return None             # fluxpart's own, damaged otherwise: named as such
        # as pandas.read_parquet reads it (its PANDAS_ATTRS into attrs), on this thread
        # (store.arrow_table): pandas' reader starts pyarrow's threads (faults33)
        table = arrow_table(path)
        frame = table.to_pandas(use_threads=False)
        copied = (table.schema.metadata or {}).get(b"PANDAS_ATTRS")
        if copied is not None:
            frame.attrs = json.loads(copied)
    except (FluxpartError, OSError, ValueError, ImportError, pa.ArrowException):
        return None
    if isinstance(index, str) and index in frame.columns and isinstance(frame.index,
                                                                       pd.RangeIndex):
        frame = frame.set_index(index)
    return frame


def _recorded_file_inside(path: Path, manifest: dict) -> str | None:
    """What to say of an unlisted file in the result folder that is the run's own input
    file or site config (its SHA-256 recorded in the manifest), or None.

    Such a file was put into the folder to travel with it; it fails the folder check
    like any other, but "not listed in the manifest" did not say it is the genuine input
    or that moving it out, to its recorded place, is the whole fix.
    """
    provenance = manifest.get("provenance")
    if not isinstance(provenance, dict) or not path.is_file() or path.is_symlink():
        return None
    recorded = []
    for key, what in (("input", "input file"), ("site_config", "site config")):
        entry = provenance.get(key)
        if not isinstance(entry, dict):
            continue
        parts = entry.get("files") if isinstance(entry.get("files"), list) else [entry]
        recorded += [(part, what) for part in parts if isinstance(part, dict)]
    try:
        if path.stat().st_size > 4 * 2**30:
            return None
        sha = file_sha256(path)
    except (OSError, FluxpartError):
        return None
    for part, what in recorded:
        if part.get("sha256") == sha:
            place = part.get("path")
            where = f" ({place!r} relative to the folder)" if isinstance(place, str) else ""
            return (f"is the run's {what} (its recorded SHA-256), put into the result folder, "
                    f"which must hold only the files its manifest lists: move it out to its "
                    f"recorded place{where} and verify again")
    return None


def _read_stored(directory: Path):
    """The manifest, the folder's mismatches with it, notes and the stored tables, all read
    from one state of the folder.

    A run replacing the folder while it is read swaps a new folder in whole
    (:func:`fluxpart.resultdir.swapped_in`); a manifest read before that swap and tables
    read after it were two genuine results compared as one (22 value differences on the
    demo, "NOT reproduced"). The folder's identity (device, inode) is taken before and
    after; where it changed, everything is read again (three tries, as
    :func:`fluxpart.resultdir.read_folder` does).
    """
    from .resultdir import check_folder, folder_identity

    for _attempt in range(3):
        before = folder_identity(directory)
        manifest = read_manifest(directory)
        newer = newer_format_reason(manifest)
        if newer:
            raise InputFileError(f"verify: {str(directory)!r} {newer}; not judged")
        for key in ("config", "site", "provenance", "tables"):
            if not isinstance(manifest.get(key), dict):
                raise InputFileError(f"verify: {str(directory / 'manifest.json')!r} has no "
                                     f"{key!r} entry; it is not a complete fluxpart manifest")
        differences, notes = [], []
        for problem in check_folder(directory, manifest):
            if problem.kind == "leftover":
                # an interrupted report's staging: not part of the result, as report/ is not
                notes.append(problem.describe())
                continue
            kind = {"missing": "file", "entry": "file", "content": "file"}.get(problem.kind,
                                                                              problem.kind)
            table = next((n for n, e in manifest["tables"].items()
                          if isinstance(e, dict) and e.get("file") == problem.file), "folder")
            if kind == "hash":
                entry = manifest["tables"][table]
                differences.append(Difference(table, "hash", column=problem.file,
                                              stored=str(entry.get("sha256")),
                                              recomputed=file_sha256(directory / problem.file)))
            elif kind == "file":
                differences.append(Difference(table, "file", stored=problem.file,
                                              recomputed=problem.detail))
            else:
                detail = problem.detail
                if kind == "extra":
                    detail = _recorded_file_inside(directory / problem.file.rstrip("/"),
                                                   manifest) or detail
                differences.append(Difference("folder", kind, column=problem.file,
                                              stored=detail))
        stored_tables = {}
        for name, entry in sorted(manifest["tables"].items()):
            path = directory / str(entry.get("file", "")) if isinstance(entry, dict) else None
            if path is None or not path.is_file():
                continue
            try:
                stored_tables[name] = read_table(path)
            except (FluxpartError, OSError, ValueError) as error:
                columns = entry.get("columns")
                plain = _rewritten_elsewhere(path, columns[0] if isinstance(columns, list)
                                             and columns else None)
                if plain is None:
                    differences.append(Difference(name, "file", stored=entry["file"],
                                                  recomputed=f"is unreadable: {error}"))
                    continue
                stored_tables[name] = plain
                stored_tables[name].attrs["rewritten"] = True
                differences.append(Difference(name, "file", stored=entry["file"], recomputed=(
                    "was rewritten by another program (e.g. pandas' to_parquet): fluxpart's "
                    "metadata (units, descriptions, site) is gone; its values are compared "
                    "with the rerun's where the result is recomputed (a note then says how)")))
        trail = _run_log_note(directory, manifest)
        if trail:
            notes.append(trail)
        if folder_identity(directory) == before:
            break
    return manifest, differences, notes, stored_tables


#: The manifest seal a report page names (:func:`fluxpart.report` writes it in its
#: provenance table).
_PAGE_SEAL = re.compile(r'manifest seal</th><td><span class="hash">SHA-256 ([0-9a-f]{64})<')


def _page_of_other_result(directory: Path, manifest: dict) -> str | None:
    """A note where ``report/report.html`` names another manifest seal than the folder's.

    The page is not hashed, so a page copied in from another result (``cp -r`` of one
    result's folder over another's, a report folder moved between results) sat beside
    tables it was not drawn from while verify passed them, with only the general note
    that the page is not verified (round faults48). The page names the seal of the
    manifest it was drawn from; a different one is named here. Nothing where the page or
    its seal cannot be read (an earlier release's page, a page edited)."""
    seal = manifest.get("seal")
    try:
        page = (directory / "report" / "report.html").read_text(encoding="utf-8",
                                                                errors="replace")
    except OSError:
        return None
    found = _PAGE_SEAL.search(page)
    if not isinstance(seal, str) or found is None or found.group(1) == seal:
        return None
    return (f"report/report.html was drawn from another result (manifest seal "
            f"{found.group(1)[:12]}...), not from this folder's tables (seal {seal[:12]}...): "
            "its numbers and figures are not this result's; redraw it with `fluxpart report`")


def _run_log_note(directory: Path, manifest: dict) -> str | None:
    """A note where the run log the manifest lists is gone or no longer a JSON record.

    The run log is never hashed (it is the one file two identical runs write
    differently), so its loss changes no verdict; but it is the run's trail (who ran it,
    when, on which host, in which folder, with which command line), and a verify that
    passed without a word where it was deleted or left out of a copy let an auditor
    believe the trail was there (round faults48)."""
    unhashed = manifest.get("unhashed")
    if not isinstance(unhashed, dict) or RUN_LOG not in unhashed:
        return None
    path = directory / RUN_LOG
    if not path.exists() and not path.is_symlink():
        state = "is missing (deleted, or left out of a copy?)"
    elif _read_run_log(directory) is None:
        state = "cannot be read as the run's JSON record (edited, damaged or not a file)"
    else:
        return None
    return (f"{RUN_LOG} {state}: the numbers are judged without it, but the run's trail "
            "(who ran it, when, on which host and with which command line) is lost; "
            "restore it from a copy of the result where there is one")
