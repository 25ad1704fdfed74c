"""The result folder: Parquet tables plus ``manifest.json``, and loading them back.

The manifest records what an auditor needs to rerun and compare a result: the
site, the full resolved settings (seed included), the input file(s) with their
SHA-256, the library versions, the screening thresholds, the warnings and the
SHA-256 of every table file. It holds no wall-clock time, so the same input,
settings and versions give a byte-identical folder.
"""

from __future__ import annotations

import json
import platform
import shutil
import tempfile
from importlib import metadata
from pathlib import Path

import pandas as pd

from .config import Config
from .errors import InputFileError
from .schema import units_for_table
from .site import Site
from .store import atomic_write_bytes, read_table, write_table

__all__ = ["CAUTION", "MANIFEST_FORMAT", "library_versions", "load", "read_manifest", "write_result"]

MANIFEST_FORMAT = "fluxpart-result/1"

#: The caution carried by every manifest, CLI budget and report.
CAUTION = (
    "A tower budget is one line of evidence for carbon-credit quantification, not a certified "
    "credit. Whether and how it may be used is decided by the applicable crediting methodology "
    "and by accredited verification."
)

_TABLES = ("timeseries", "daily", "monthly", "annual", "ustar", "audit")
_LIBRARIES = ("fluxpart", "numpy", "pandas", "scipy", "statsmodels", "pyarrow")


def library_versions() -> dict[str, str]:
    """Return the versions of Python and of the libraries that shape the numbers."""
    versions = {"python": platform.python_version()}
    for name in _LIBRARIES:
        try:
            versions[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            if name == "fluxpart":
                from . import __version__
                versions[name] = __version__
            else:
                versions[name] = "not installed"
    return versions


def _result_tables(result) -> dict[str, pd.DataFrame]:
    tables = {name: getattr(result, name) for name in _TABLES}
    for name, table in result.parameters.items():
        tables[f"parameters_{name}"] = table
    counts = result.screening_counts.rename("records").to_frame()
    counts.index = counts.index.rename("reason")
    tables["screening"] = counts
    return tables


def _jsonable(value):
    return json.loads(json.dumps(value, default=str))


def write_result(result, directory) -> Path:
    """Write a :class:`~fluxpart.pipeline.Result` to `directory`.

    All tables are written to a temporary folder beside `directory` first and
    moved into place only when every one has been written; ``manifest.json``
    comes last. A failed write leaves no half-written folder behind.

    Returns
    -------
    pathlib.Path
        The folder written.
    """
    directory = Path(directory)
    directory.parent.mkdir(parents=True, exist_ok=True)
    staging = Path(tempfile.mkdtemp(prefix=f".{directory.name}.", dir=directory.parent))
    try:
        entries = {}
        for name, table in _result_tables(result).items():
            frame = table if table.index.name is not None else table.rename_axis("row")
            columns = [frame.index.name or "index", *frame.columns]
            sha = write_table(frame, staging / f"{name}.parquet",
                              units_for_table(_unit_table(name), columns), name)
            entries[name] = {"file": f"{name}.parquet", "sha256": sha, "rows": len(frame),
                             "columns": [str(c) for c in columns]}
        manifest = {
            "format": MANIFEST_FORMAT,
            "caution": CAUTION,
            "site": result.site.to_dict(),
            "config": result.config.to_dict(),
            "seed": result.config.seed,
            "provenance": _jsonable(result.provenance),
            "versions": library_versions(),
            "warnings": list(result.warnings),
            "tables": entries,
        }
        text = json.dumps(manifest, indent=2, sort_keys=True, ensure_ascii=False) + "\n"
        directory.mkdir(parents=True, exist_ok=True)
        for entry in entries.values():
            (staging / entry["file"]).replace(directory / entry["file"])
        atomic_write_bytes(directory / "manifest.json", text.encode("utf-8"))
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return directory


def _unit_table(name: str) -> str:
    return name if name in ("timeseries", "daily", "monthly", "annual", "audit") else "parameters"


def read_manifest(directory) -> dict:
    """Return the parsed ``manifest.json`` of a result folder."""
    path = Path(directory) / "manifest.json"
    if not path.exists():
        raise InputFileError(f"{str(path)!r} does not exist: {str(directory)!r} is not a "
                             "fluxpart result folder")
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError as error:
        raise InputFileError(f"{str(path)!r} is not valid JSON: {error}") from None


def load(directory):
    """Load a result folder written by :meth:`Result.write` as a ``Result``.

    Parameters
    ----------
    directory : path-like
        Folder with ``manifest.json`` and the Parquet tables.

    Returns
    -------
    fluxpart.pipeline.Result
        The same tables, site and settings that were written.
    """
    from .pipeline import Result

    directory = Path(directory)
    manifest = read_manifest(directory)
    tables = {name: read_table(directory / entry["file"])
              for name, entry in manifest["tables"].items()}
    parameters = {name[len("parameters_"):]: table for name, table in tables.items()
                  if name.startswith("parameters_")}
    config = Config.from_mapping(manifest["config"], where="manifest config:")
    return Result(site=Site(**manifest["site"]), config=config,
                  timeseries=tables["timeseries"], daily=tables["daily"],
                  monthly=tables["monthly"], annual=tables["annual"], ustar=tables["ustar"],
                  audit=tables["audit"],
                  parameters=parameters, screening_counts=tables["screening"]["records"],
                  warnings=tuple(manifest["warnings"]), provenance=manifest["provenance"])
