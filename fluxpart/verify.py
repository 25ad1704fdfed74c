"""The auditor's rerun: recompute a result folder from its manifest and compare.

:func:`verify` reads ``manifest.json`` of a result folder, checks that every
Parquet file still has the SHA-256 the manifest records, reruns the pipeline
from the recorded input and the recorded settings (the manifest's ``config``
and ``site``, not those of the site config file), and compares every stored
table with the recomputed one value by value. A difference is reported with
its table, column, row (index value) and both values.

What is recomputed:

- a result of ``fluxpart run``: the recorded input file (or the one given with
  ``--input`` if it has moved) must exist and have the recorded SHA-256, and so
  must the site config, whose ``[input]`` table says how to read the file;
- a result of ``fluxpart demo``: the invented demo record is regenerated from
  its recorded seed and variant.

Because the manifest's own settings drive the rerun, an edited setting in
``manifest.json`` shows up as differing tables; a hand-edited Parquet file shows
up both as a hash mismatch and at the cell that changed. Library versions that
differ from the recorded ones are reported as warnings: they may change the last
digits of a result.

Caution: identical numbers show that a result is reproducible from the recorded
input and settings. They do not certify the input data, the methods or a
carbon credit; that is for the applicable crediting methodology and accredited
verification.
"""

from __future__ import annotations

import json
import sys
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .config import Config
from .errors import FluxpartError, InputFileError
from .manifest import CAUTION, library_versions, read_manifest
from .site import Site
from .store import file_sha256, read_table

__all__ = ["Difference", "VerifyReport", "command_verify", "verify"]

#: Differing columns listed per table before the rest are summarised.
_MAX_COLUMNS_LISTED = 5
_MANIFEST_KEYS = ("format", "site", "config", "seed", "warnings")


@dataclass(frozen=True)
class Difference:
    """One way in which a stored result differs from its recomputation.

    Attributes
    ----------
    table : str
        Table name (``"annual"``, ...) or ``"manifest"``/``"input"``.
    kind : str
        ``"value"`` (cells of a column differ), ``"hash"`` (a file's SHA-256 is not
        the recorded one), ``"input"`` (the input or site config changed),
        ``"file"`` (a table file is missing or unreadable), ``"table"`` (a table
        only on one side), ``"columns"``, ``"rows"``, ``"index"``, ``"dtype"``,
        ``"more"`` (further differing columns of a table, listed in `stored`) or
        ``"manifest"`` (a manifest entry differs).
    column : str or None
        Column at fault.
    row : str or None
        ``"<index name>=<value>"`` of the first differing row.
    stored, recomputed : str
        The two values as text (full precision for numbers).
    count : int
        How many cells (or rows) of the column differ.
    """

    table: str
    kind: str
    column: str | None = None
    row: str | None = None
    stored: str = ""
    recomputed: str = ""
    count: int = 1

    def describe(self) -> str:
        """Return one line naming the location and both values."""
        if self.kind == "value":
            more = f" ({self.count} rows differ; first shown)" if self.count > 1 else ""
            return (f"{self.table}: column {self.column!r} at {self.row}: stored "
                    f"{self.stored}, recomputed {self.recomputed}{more}")
        if self.kind == "more":
            return f"{self.table}: {self.count} more column(s) differ: {self.stored}"
        if self.kind == "input":
            return (f"{self.column} {self.row} has SHA-256 {self.recomputed}, but the manifest "
                    f"records {self.stored}: it is not the {self.column} the result was "
                    "computed from, so nothing was recomputed")
        if self.kind == "hash":
            return (f"{self.table}: file SHA-256 {self.recomputed} is not the {self.stored} "
                    "recorded in manifest.json (the file was changed after it was written)")
        where = f"{self.table}" + (f": column {self.column!r}" if self.column else "") + \
            (f" at {self.row}" if self.row else "")
        return f"{where}: {self.kind} differs: stored {self.stored}, recomputed {self.recomputed}"


@dataclass(frozen=True)
class VerifyReport:
    """Outcome of :func:`verify`.

    Attributes
    ----------
    directory : pathlib.Path
        The result folder checked.
    source : str
        ``"run"`` or ``"demo"``: what was recomputed.
    tables : tuple of str
        Tables compared.
    differences : tuple of Difference
        Every difference found; empty when the result is reproduced.
    version_warnings : tuple of str
        Libraries whose version differs from the recorded one.
    notes : tuple of str
        Facts that are not failures (e.g. equal values in files that differ in bytes).
    """

    directory: Path
    source: str
    tables: tuple = ()
    differences: tuple = ()
    version_warnings: tuple = ()
    notes: tuple = field(default=())

    @property
    def identical(self) -> bool:
        """True when no difference was found."""
        return not self.differences

    def format(self) -> str:
        """Return the report as text for the command line."""
        if self.identical:
            lines = [f"identical: all {len(self.tables)} tables of {self.directory} match the "
                     f"recomputation from the recorded {self.source} input and settings"]
        else:
            lines = [f"NOT identical: {len(self.differences)} difference(s) between "
                     f"{self.directory} and its recomputation:"]
            lines += [f"  {d.describe()}" for d in self.differences]
        lines += [f"note: {n}" for n in self.notes]
        lines.append("Caution: identical numbers show the result is reproducible from the "
                     "recorded input and settings; they do not certify the data or a credit. "
                     + CAUTION)
        return "\n".join(lines)


# --------------------------------------------------------------------------- helpers

def _show(value) -> str:
    if value is None or (isinstance(value, float) and np.isnan(value)) or value is pd.NaT:
        return "missing"
    if isinstance(value, (float, np.floating)):
        return repr(float(value))
    if isinstance(value, (np.integer, np.bool_)):
        return repr(value.item())
    return repr(value) if isinstance(value, str) else str(value)


def _row_label(index: pd.Index, position: int) -> str:
    return f"{index.name or 'row'}={index[position]}"


def _unequal(left: pd.Series, right: pd.Series) -> np.ndarray:
    """Positions where two same-length columns differ (missing equals missing)."""
    a, b = left.reset_index(drop=True), right.reset_index(drop=True)
    both_missing = a.isna().to_numpy() & b.isna().to_numpy()
    try:
        same = a.eq(b).fillna(False).to_numpy(dtype=bool)
    except (TypeError, ValueError):
        same = np.array([x == y for x, y in zip(a.tolist(), b.tolist(), strict=True)],
                        dtype=bool)
    return ~(same | both_missing)


def _compare_table(name: str, stored: pd.DataFrame, recomputed: pd.DataFrame) -> list:
    out = []
    if list(stored.columns) != list(recomputed.columns):
        only_stored = [c for c in stored.columns if c not in recomputed.columns]
        only_new = [c for c in recomputed.columns if c not in stored.columns]
        out.append(Difference(name, "columns", stored=f"extra {only_stored}" if only_stored
                              else "same names, other order" if not only_new else "-",
                              recomputed=f"extra {only_new}" if only_new else "-"))
    if len(stored) != len(recomputed):
        out.append(Difference(name, "rows", stored=f"{len(stored)} rows",
                              recomputed=f"{len(recomputed)} rows"))
        return out
    index_differs = _unequal(pd.Series(stored.index), pd.Series(recomputed.index))
    if index_differs.any():
        position = int(np.flatnonzero(index_differs)[0])
        out.append(Difference(name, "index", column=stored.index.name, row=f"row {position}",
                              stored=_show(stored.index[position]),
                              recomputed=_show(recomputed.index[position]),
                              count=int(index_differs.sum())))
        return out
    listed = 0
    unlisted = []
    for column in [c for c in stored.columns if c in recomputed.columns]:
        left, right = stored[column], recomputed[column]
        differs = _unequal(left, right)
        if differs.any():
            if listed >= _MAX_COLUMNS_LISTED:
                unlisted.append(str(column))
                continue
            position = int(np.flatnonzero(differs)[0])
            out.append(Difference(name, "value", column=str(column),
                                  row=_row_label(stored.index, position),
                                  stored=_show(left.iloc[position]),
                                  recomputed=_show(right.iloc[position]),
                                  count=int(differs.sum())))
            listed += 1
        elif left.dtype != right.dtype:
            out.append(Difference(name, "dtype", column=str(column), stored=str(left.dtype),
                                  recomputed=str(right.dtype)))
    if unlisted:
        out.append(Difference(name, "more", stored=", ".join(unlisted), count=len(unlisted)))
    return out


def _check_hashes(directory: Path, manifest: dict) -> tuple[list, dict]:
    """Compare each table file with its recorded SHA-256; return (differences, stored tables)."""
    differences, tables = [], {}
    for name, entry in sorted(manifest.get("tables", {}).items()):
        path = directory / entry["file"]
        if not path.exists():
            differences.append(Difference(name, "file", stored=f"{entry['file']} recorded",
                                          recomputed="file missing from the folder"))
            continue
        actual = file_sha256(path)
        if actual != entry.get("sha256"):
            differences.append(Difference(name, "hash", stored=str(entry.get("sha256")),
                                          recomputed=actual))
        try:
            tables[name] = read_table(path)
        except (FluxpartError, OSError, ValueError) as error:
            differences.append(Difference(name, "file", stored=entry["file"],
                                          recomputed=f"unreadable: {error}"))
    return differences, tables


def _check_file(role: str, recorded: dict, path: Path, hint: str) -> Difference | None:
    if not path.exists():
        raise InputFileError(f"verify: the {role} {str(path)!r} recorded in the manifest does not "
                             f"exist; {hint}")
    actual = file_sha256(path)
    if actual != recorded.get("sha256"):
        return Difference("input", "input", column=role, row=str(path),
                          stored=str(recorded.get("sha256")), recomputed=actual)
    return None


def _frame_for(provenance: dict, input_path) -> tuple[str, pd.DataFrame | None, list]:
    """Return (source, canonical frame or None, input differences)."""
    if "demo" in provenance:
        from . import demo

        recorded = provenance["demo"]
        frame, _ = demo.site_year(seed=recorded.get("seed", 0),
                                  variant=recorded.get("variant", "c3"))
        return "demo", frame, []
    if "input" not in provenance or "site_config" not in provenance:
        raise InputFileError("verify: the manifest records neither an input file and site "
                             "config (fluxpart run) nor a demo seed (fluxpart demo), so the "
                             "result cannot be recomputed")
    from .io import read_site_config
    from .io import read_table as read_records

    config_path = Path(provenance["site_config"]["path"])
    changed = _check_file("site config", provenance["site_config"], config_path,
                          "restore it (it says how to read the input)")
    if changed is not None:
        return "run", None, [changed]
    site_config = read_site_config(config_path)
    if input_path is not None:
        data_path = Path(input_path)
    else:
        data_path = Path(provenance["input"]["path"])
        if not data_path.is_absolute() and not data_path.exists():
            # A relative path was relative to the folder of the run; the site config
            # (recorded with its absolute path) locates the file the same way.
            data_path = site_config.input_path
    changed = _check_file("input file", provenance["input"], data_path,
                          "give its new location with --input")
    if changed is not None:
        return "run", None, [changed]
    frame, _ = read_records(data_path, **site_config.table_arguments())
    return "run", frame, []


def _compare_manifests(stored: dict, recomputed: dict) -> list:
    out = []
    for key in _MANIFEST_KEYS:
        if stored.get(key) != recomputed.get(key):
            out.append(Difference("manifest", "manifest", column=key,
                                  stored=json.dumps(stored.get(key), sort_keys=True),
                                  recomputed=json.dumps(recomputed.get(key), sort_keys=True)))
    screening = (stored.get("provenance", {}).get("screening"),
                 recomputed.get("provenance", {}).get("screening"))
    if screening[0] != screening[1]:
        out.append(Difference("manifest", "manifest", column="provenance.screening",
                              stored=json.dumps(screening[0], sort_keys=True),
                              recomputed=json.dumps(screening[1], sort_keys=True)))
    if stored.get("seed") != stored.get("config", {}).get("seed"):
        out.append(Difference("manifest", "manifest", column="seed",
                              stored=f"seed {stored.get('seed')!r}",
                              recomputed=f"config seed {stored.get('config', {}).get('seed')!r} "
                              "(the one used)"))
    return out


# --------------------------------------------------------------------------- public

def verify(directory, *, input_path=None) -> VerifyReport:
    """Recompute a result folder from its manifest and compare every table.

    Parameters
    ----------
    directory : path-like
        Folder written by ``fluxpart run``, ``fluxpart demo`` or ``Result.write``.
    input_path : path-like, optional
        The input file, if it has moved since the run; it must still have the
        recorded SHA-256.

    Returns
    -------
    VerifyReport
        ``identical`` is True when every table file has its recorded hash, every
        table equals its recomputation value for value, and the recorded
        settings, site and warnings are those of the rerun.

    Raises
    ------
    InputFileError
        If the folder has no manifest, or the recorded input or site config is
        missing (the message says how to point to a moved input).
    ConfigError
        If the manifest's settings or site are invalid.
    FluxpartError
        If the recorded input can no longer be read or processed.

    Notes
    -----
    The rerun uses the manifest's ``config`` (:meth:`Config.from_mapping`) and
    ``site``, with the recorded seed; the site config file only tells how to
    read the input. The recomputed result is written to a temporary folder with
    the same writer and read back, so both sides pass through the same Parquet
    conversion. Values are compared exactly (a missing value equals a missing
    value); equal values in files whose bytes differ (e.g. another pyarrow
    version) are noted, not failed. An input whose SHA-256 changed is reported
    as a difference and not recomputed.
    """
    from .pipeline import process

    directory = Path(directory)
    manifest = read_manifest(directory)
    for key in ("config", "site", "provenance", "tables"):
        if key not in manifest:
            raise InputFileError(f"verify: {str(directory / 'manifest.json')!r} has no {key!r} "
                                 "entry; it is not a complete fluxpart manifest")
    versions = manifest.get("versions", {})
    current = library_versions()
    version_warnings = tuple(
        f"{name} {current.get(name, 'not installed')} is installed, the result was written with "
        f"{recorded}; numbers may differ in their last digits"
        for name, recorded in sorted(versions.items()) if current.get(name) != recorded)
    differences, stored_tables = _check_hashes(directory, manifest)
    provenance = manifest["provenance"]
    source, frame, input_differences = _frame_for(provenance, input_path)
    if frame is None:
        return VerifyReport(directory=directory, source=source,
                            tables=tuple(sorted(stored_tables)),
                            differences=tuple(input_differences + differences),
                            version_warnings=version_warnings)
    config = Config.from_mapping(manifest["config"], where="manifest config:")
    site = Site(**manifest["site"])
    result = process(frame, site, config,
                     provenance={k: v for k, v in provenance.items() if k != "screening"})
    notes = []
    with tempfile.TemporaryDirectory(prefix="fluxpart-verify-") as scratch:
        again = result.write(Path(scratch) / "recomputed")
        new_manifest = read_manifest(again)
        differences += _compare_manifests(manifest, new_manifest)
        names = sorted(set(manifest["tables"]) | set(new_manifest["tables"]))
        for name in names:
            if name not in new_manifest["tables"]:
                differences.append(Difference(name, "table", stored="present",
                                              recomputed="not produced"))
                continue
            if name not in manifest["tables"]:
                differences.append(Difference(name, "table", stored="absent",
                                              recomputed="produced"))
                continue
            if name not in stored_tables:
                continue
            recomputed = read_table(again / new_manifest["tables"][name]["file"])
            found = _compare_table(name, stored_tables[name], recomputed)
            differences += found
            if not found and (new_manifest["tables"][name]["sha256"]
                              != manifest["tables"][name]["sha256"]):
                notes.append(f"{name}: values identical, file bytes differ from the "
                             "recorded ones (library versions?)")
    return VerifyReport(directory=directory, source=source, tables=tuple(names),
                        differences=tuple(differences), version_warnings=version_warnings,
                        notes=tuple(notes))


def command_verify(args) -> int:
    """``fluxpart verify DIR [--input FILE]``: 0 when identical, 1 when not.

    Parameters
    ----------
    args : argparse.Namespace
        ``directory`` (the result folder) and ``input`` (a moved input file or None).

    Returns
    -------
    int
        0 when every table is reproduced, 1 otherwise. Errors (missing manifest
        or input) propagate as :class:`~fluxpart.errors.FluxpartError`, which the
        command line prints as one line with exit status 2.
    """
    report = verify(args.directory, input_path=getattr(args, "input", None))
    for warning in report.version_warnings:
        print(f"warning: {warning}", file=sys.stderr)
    print(report.format())
    return 0 if report.identical else 1
