"""Many sites on Dask: ``fluxpart batch SITES.toml``.

A network file (``SITES.toml``, a format of fluxpart's own) lists site configs;
each site becomes one Dask task that runs
:func:`fluxpart.pipeline.process_site_config` and writes its result folder
exactly as ``fluxpart run`` does (:meth:`fluxpart.result.Result.write`).
The client then writes the network tables:

- ``<out>/network_annual/``, ``<out>/network_monthly/`` and ``<out>/network_daily/`` —
  every site's annual, monthly and daily budgets, each as one Parquet dataset
  partitioned by site (``site=<key>/part-0.parquet``), readable with
  ``pyarrow.dataset.dataset(path, partitioning="hive")`` or
  ``pandas.read_parquet(path)``, which restore the ``site`` column, or with
  :func:`read_network`;
- ``<out>/failures.parquet`` — one row per site that failed: its key, config
  path, error class and message;
- ``<out>/network.json`` — written first as "incomplete" and last as the seal of
  the above: the SHA-256 of each network file and the manifest seal of each site
  folder they come from. :func:`read_network` refuses files that do not match it
  (a batch stopped part-way), so the network tables are never read as a mix.

Network file::

    # SITES.toml: paths and globs relative to this file
    [batch]
    sites = ["towers/*.toml", "other/fen.toml"]
    out = "network-output"       # optional; default: <SITES stem>-output beside it
    site_time_limit = 240        # optional [min]; a site running longer fails as hung

Inputs travel as paths, not data: the workers open the site configs and tower
files and write the result folders themselves, so every worker must see the
same file system as the client (one machine, or a shared file system on a
cluster). Paths are resolved to absolute ones before they are sent.

A site whose input is bad does not stop the others: its error is recorded in the
failures table and the exit status is 1. A rerun skips each site whose result
folder is up to date (see :func:`is_up_to_date`) unless ``force`` is given.
"""

from __future__ import annotations

import glob
import hashlib
import json
import logging
import math
import os
import re
import shutil
import sys
import tempfile
import time
import traceback
import uuid
import warnings
from collections import Counter
from concurrent.futures import CancelledError
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from ._validate import odd_entry, other_system_path_hint, read_toml, unicode_form_hint
from .config import Config, absent_added_settings, suggest_key
from .errors import ConfigError, FluxpartError, FluxpartWarning, InputFileError, OutputError
from .fingerprint import code_fingerprint
from .manifest import (
    CAUTION,
    MANIFEST_FILE,
    MANIFEST_FORMAT,
    library_versions,
    read_manifest,
    recorded_inputs,
    shown_name,
    shown_path,
)
from .network_layout import (  # noqa: F401 - also this module's names
    NETWORK_DATASET,
    NETWORK_DATASETS,
    NETWORK_SEAL,
    enclosing_network_dataset,
)
from .network_tables import (  # noqa: F401 - also this module's names
    FAILURES_FILE,
    NETWORK_SITE_DESCRIPTION,
    failed_sites,
    network_table,
    read_network,
    read_network_annual,
)
from .resultdir import check_folder, clean_leftovers, folder_lock, interrupted_writes
from .schema import CALENDAR_YEAR_START, time_convention, units_for_table
from .shared_records import day_keys, shared_days
from .store import (
    PANDAS_ATTRS_KEY,
    arrow_table,
    atomic_write_bytes,
    file_sha256,
    folder_mode,
    read_table,
    reader_attrs,
    remove_folder,
    remove_stale,
    require_owner_access,
    set_mode,
    write_table,
)
from .swapped_sites import swapped_pairs
from .worker_match import (
    client_environment,
    mismatch_error,
    older_worker_error,
    scratch_folder_problem,
)

__all__ = [
    "BatchReport",
    "NetworkFile",
    "SiteOutcome",
    "command_batch",
    "is_up_to_date",
    "read_network",
    "read_network_annual",
    "read_sites_file",
    "run_batch",
    "run_site",
    "same_input_sites",
    "same_name_sites",
    "same_records_sites",
]

_NETWORK_FORMAT = "fluxpart-network/1"

_BATCH_KEYS = ("out", "sites", "site_time_limit")
_DEFAULT_WORKERS = 2
#: Default of ``[batch] site_time_limit`` [min]: a site that runs longer is taken for hung.
#: One site-year of 30-min records takes ~2 s of CPU and ten ~14 s here (DEVELOPERS.md,
#: ``bench_commands.py``); four hours leave a factor of ~1000 for long records, 5-min
#: records, slow or shared machines, and stop only a site that waits for ever (an input
#: on a network share that stopped answering, a stalled disk).
DEFAULT_SITE_TIME_LIMIT_MINUTES = 240.0
#: How often the client looks which sites are running [s] (the limit's resolution).
_POLL_SECONDS = 1.0
#: How long a cluster may have no worker before the batch says it is waiting for one [s]:
#: well above the few seconds a local worker's nanny takes to restart a killed worker
#: (common practice); a cluster that scales from zero (adaptive, a job queue) may take
#: longer, so this is a note, not a failure.
_NO_WORKER_NOTE_SECONDS = 60.0
#: Worker states in which a Dask worker starts no task (``distributed.core.Status``).
_IDLE_WORKER_STATES = frozenset({"paused", "closing", "closing_gracefully", "closed",
                                 "failed"})
_CONNECT_TIMEOUT_SECONDS = 10
#: How long the client waits for the workers to say which sites they run [s]. A worker's
#: event loop answers within milliseconds; Dask itself warns of an event loop unresponsive
#: for 3 s (``distributed.admin.tick.limit``, (m)). A worker that does not answer in this
#: time is frozen (SIGSTOP, a paused virtual machine or container, a node swapping itself
#: to a standstill) and must not stop the client's own loop (see :func:`_running_now`).
_ASK_WORKERS_SECONDS = 10.0
_RESERVED_KEYS = {*NETWORK_DATASETS.values(), FAILURES_FILE, NETWORK_SEAL}
#: Longest site key [bytes; keys are ASCII]. A name may hold 255 bytes on ext4, XFS,
#: NTFS and APFS (NAME_MAX, common practice (m)); a site folder is written through
#: ``.KEY.staging-XXXXXXXX`` beside it (18 bytes more) and may get a ``-N`` suffix where
#: keys clash, so 200 leaves room for both.
_KEY_LIMIT = 200
_SITE_COLUMNS = {
    "site_name": ("", "the site's [site] name"),
    "latitude": ("degree_north", "latitude of the tower, north positive"),
    "longitude": ("degree_east", "longitude of the tower, east positive"),
    "utc_offset": ("hour", "offset of the site's local standard time from UTC; the stamps of "
                   "the site's tables are in it"),
}
_SITE_FIELDS = {"site_name": "name", "latitude": "latitude", "longitude": "longitude",
                "utc_offset": "utc_offset"}
_FAILURE_COLUMNS = {
    "site": ("", "site key (the result folder's name)"),
    "config": ("", "absolute path of the site config"),
    "error": ("", "error class"),
    "message": ("", "error message"),
    "kind": ("", "'input': bad input or settings; 'output': the result folder could not be "
             "written (full disk, permissions); 'internal': a fault of fluxpart or of the "
             "cluster"),
}
#: The batch summary's columns: NEE with its stated 95 % interval (review33: the sites'
#: budgets were printed side by side without any, while `run` prints each site's).
_SUMMARY_COLUMNS = ("site", "year", "nee", "nee_ci95_low", "nee_ci95_high", "gpp_nighttime",
                    "reco_nighttime", "gpp_daytime", "reco_daytime", "ustar_threshold",
                    "complete")


@dataclass(frozen=True)
class NetworkFile:
    """A parsed network file (``SITES.toml``).

    Attributes
    ----------
    path : pathlib.Path
        The network file, absolute.
    out : pathlib.Path
        Batch output folder, absolute: ``[batch] out`` relative to the file, or
        ``<stem>-output`` beside it.
    sites : tuple of (str, pathlib.Path)
        ``(key, config)`` per site in listing order: each pattern's matches sorted,
        duplicates dropped. The key names the site's result folder and its
        partition of the network dataset.
    site_time_limit : float
        ``[batch] site_time_limit`` [min]: a site still running that long after it
        started on a worker fails (default :data:`DEFAULT_SITE_TIME_LIMIT_MINUTES`).
    """

    path: Path
    out: Path
    sites: tuple
    site_time_limit: float = DEFAULT_SITE_TIME_LIMIT_MINUTES


@dataclass(frozen=True)
class SiteOutcome:
    """What one site's task did.

    Attributes
    ----------
    key : str
        Site key.
    config : str
        Absolute path of the site config.
    directory : str
        Absolute path of the site's result folder.
    status : {"written", "skipped", "failed"}
        ``"skipped"``: the folder was already up to date.
    note : str
        Why the site was (re)processed or skipped, or the failure in one line.
    site : dict or None
        The site's ``name``, ``latitude``, ``longitude`` and ``utc_offset``.
    annual : pandas.DataFrame or None
        The annual budget as stored in the folder's ``annual.parquet``
        [g C m-2 per year], indexed by year.
    error, message, kind : str
        Error class, message and ``"input"``, ``"output"`` or ``"internal"`` of a failure.
    traceback : str
        Traceback of an internal failure (a fault of fluxpart or of the cluster).
    warnings : tuple of str
        The run's warnings as its manifest records them (written or skipped sites).
    """

    key: str
    config: str
    directory: str
    status: str
    note: str = ""
    site: dict | None = None
    annual: pd.DataFrame | None = field(default=None, repr=False)
    error: str = ""
    message: str = ""
    kind: str = ""
    traceback: str = field(default="", repr=False)
    warnings: tuple = ()


@dataclass(frozen=True)
class BatchReport:
    """Outcome of :func:`run_batch`.

    Attributes
    ----------
    out : pathlib.Path
        Batch output folder.
    outcomes : tuple of SiteOutcome
        One per site, in the network file's order.
    network : pandas.DataFrame
        The network's annual budgets as written to ``out/network_annual``: a
        ``site`` column, ``year``, the site's name and location and every column of
        the sites' ``annual`` tables [g C m-2 per year].
    failures : pandas.DataFrame
        As written to ``out/failures.parquet``: ``site``, ``config``, ``error``,
        ``message``, ``kind``.
    warnings : tuple of str
        Sites whose results come from the same input files (:func:`same_input_sites`)
        or hold the same measured NEE (:func:`same_records_sites`), and the other
        network warnings.
    """

    out: Path
    outcomes: tuple
    network: pd.DataFrame = field(repr=False)
    failures: pd.DataFrame = field(repr=False)
    warnings: tuple = ()

    def _count(self, status: str) -> int:
        return sum(outcome.status == status for outcome in self.outcomes)

    @property
    def written(self) -> int:
        """Sites processed and written in this run."""
        return self._count("written")

    @property
    def skipped(self) -> int:
        """Sites whose result folder was already up to date."""
        return self._count("skipped")

    @property
    def failed(self) -> int:
        """Sites that failed."""
        return self._count("failed")

    @property
    def exit_code(self) -> int:
        """``1`` when any site failed, else ``0``."""
        return 1 if self.failed else 0


# --------------------------------------------------------------------------- network file

def read_sites_file(path) -> NetworkFile:
    """Parse and validate a network file (``SITES.toml``).

    Parameters
    ----------
    path : str or path-like
        The network file. Its ``[batch]`` table has ``sites``, a list of site
        config paths or glob patterns (``*``, ``?``, ``[...]``, ``**`` for any depth),
        relative to the file; and optionally ``out``, the output folder.

    Returns
    -------
    NetworkFile

    Raises
    ------
    InputFileError
        If the file does not exist or cannot be read.
    ConfigError
        If the TOML is invalid, a table or key is unknown (the nearest valid one is
        suggested), ``sites`` is missing or empty, a path does not exist or a
        pattern matches no ``.toml`` file.

    Notes
    -----
    A pattern keeps only files ending in ``.toml``, other than the network file
    itself and other network files (a ``[batch]`` table); a plain path is taken as
    written. Matches of each pattern are sorted; a config listed twice is kept once.
    Relative paths are read from the folder of the path as written, a symbolic link's
    own folder, not its target's: the network file's ``sites`` and ``out``, and each
    site config's ``[input] path`` (as ``fluxpart run`` and ``check`` read it), so site
    configs that are links to one shared config are one site each, reading the input
    beside their own link (round review30; they were one site, reading the input
    beside the shared file). A site's key is its config's file stem (characters other than letters,
    digits, ``.``, ``_`` and ``-`` become ``_``); stems that occur more than once
    are prefixed with their folder's name (``north/tower.toml`` ->
    ``north-tower``), and a key still taken gets ``-2``, ``-3``, ... Keys are
    compared without case (``Fen`` and ``fen`` are one folder on macOS and Windows).
    """
    path = Path(path)
    document = read_toml(path, "network file")
    if "batch" not in document and {"site", "input"} & set(document):
        # "unknown table [site]" left the fix to the reader (review43)
        raise ConfigError(f"{str(path)!r} is a site config, not a network file: process it "
                          f"with fluxpart run {str(path)}, or list it in a network file's "
                          '[batch] sites = ["..."]')
    for key in document:
        if key != "batch":
            raise ConfigError(f"network file {str(path)!r}: unknown table [{key}]"
                              f"{suggest_key(key, ('batch',))}")
    table = document.get("batch")
    if not isinstance(table, dict):
        raise ConfigError(f"network file {str(path)!r} has no [batch] table; write [batch] "
                          'with sites = ["sites/*.toml"]')
    for key in table:
        if key not in _BATCH_KEYS:
            raise ConfigError(f"[batch] {key}: unknown setting{suggest_key(key, _BATCH_KEYS)}")
    # the link's own folder, not its target's (POSIX path resolution of a relative name
    # read from a file's content, as io.read_site_config reads [input] path)
    base = _as_given(path).parent
    out = table.get("out", f"{path.stem}-output")
    if not isinstance(out, str) or not out.strip():
        raise ConfigError(f"[batch] out = {out!r}: expected a folder path (a string, relative "
                          "to the network file)")
    limit = check_site_time_limit(table.get("site_time_limit",
                                            DEFAULT_SITE_TIME_LIMIT_MINUTES),
                                  "[batch] site_time_limit")
    configs = _expand_sites(table.get("sites"), base, path.resolve())
    keys = _site_keys(configs)
    return NetworkFile(path=path.resolve(), out=base / out,
                       sites=tuple(zip(keys, configs, strict=True)), site_time_limit=limit)


def check_site_time_limit(value, where: str) -> float:
    """A site time limit [min] as a positive finite float, else a ConfigError naming `where`."""

    if isinstance(value, bool) or not isinstance(value, (int, float)) \
            or not math.isfinite(value) or value <= 0:
        raise ConfigError(f"{where} = {value!r}: expected the minutes a site may run before "
                          f"it is taken for hung, a positive number (default "
                          f"{DEFAULT_SITE_TIME_LIMIT_MINUTES:g})")
    return float(value)


def _expand_sites(patterns, base: Path, network: Path | None = None) -> list[Path]:
    """The site configs the patterns name; a glob's match of the `network` file is dropped."""
    if patterns is None:
        raise ConfigError('[batch] sites is missing; list the site configs, e.g. sites = '
                          '["sites/*.toml"] (paths and globs relative to the network file)')
    if not isinstance(patterns, list) or not patterns:
        raise ConfigError(f"[batch] sites = {patterns!r}: expected a non-empty list of site "
                          "config paths or glob patterns")
    configs, seen = [], set()
    for position, pattern in enumerate(patterns):
        where = f"[batch] sites[{position}] = {pattern!r}"
        if not isinstance(pattern, str) or not pattern.strip():
            raise ConfigError(f"{where}: expected a path or glob pattern (a non-empty string)")
        full = base / pattern
        # a site folder named with brackets ("tower[2021]", "plot[3]", an export of a
        # spreadsheet's sheet) is a legal path: the glob read "[2021]" as one character of
        # 2, 0 or 1 and refused an existing file as matching nothing. A path that names an
        # existing file is that file (POSIX glob(7): brackets are pattern characters (m))
        if glob.has_magic(pattern) and not full.is_file():
            # the network file's own folder is a path, not a pattern: a project folder
            # named "towers [2021]" made every site glob match nothing (io.py escapes the
            # folder of a site config's input glob so)
            searched = Path(glob.escape(str(base))) / pattern
            _refuse_odd_matches(where, searched)
            # the network file is a .toml file too: a glob beside it (*.toml) is not
            # meant to list it as a site
            matches = sorted(Path(p) for p in glob.glob(str(searched), recursive=True)
                             if p.endswith(".toml") and Path(p).is_file()
                             and Path(p).resolve() != network and not _is_network_file(p))
            if not matches:
                raise ConfigError(f"{where} matches no .toml file other than the network "
                                  f"file itself (looked for {str(full)!r})"
                                  f"{other_system_path_hint(pattern)}")
        elif full.is_file() and full.resolve() == network:
            raise ConfigError(f"{where} is the network file itself, not a site config")
        elif full.is_file():
            matches = [full]
        else:
            # a named pipe, a dangling link or a folder was "no such file" (round faults41)
            kind = odd_entry(full) or ("a folder" if full.is_dir() else "")
            if kind:
                raise ConfigError(f"{where}: {str(full)!r} is {kind}; expected a site "
                                  "config file")
            raise ConfigError(f"{where}: no such file {str(full)!r}"
                              f"{other_system_path_hint(pattern) or unicode_form_hint(full)}")
        for match in matches:
            given = _as_given(match)
            if given not in seen:
                seen.add(given)
                configs.append(given)
    return configs


def _refuse_odd_matches(where: str, full: Path) -> None:
    """Refuse a site-config glob matching a ``.toml`` entry that is no readable file.

    A config linked from a share that is not mounted (a dangling link), a loop of links
    or a named pipe was dropped by the glob's file test without a word, and the network
    tables summed the other towers as if the network had one fewer (measured: "4
    site(s)", the fifth, a dangling link, unnamed). :func:`fluxpart._validate.odd_entry` says
    what the entry is.

    References
    ----------
    Python ``glob`` documentation: broken symlinks are included in the results (m);
    ``path_resolution(7)``: ELOOP, ENOENT (m).
    """
    for text in sorted(glob.glob(str(full), recursive=True)):
        odd = odd_entry(Path(text)) if text.endswith(".toml") else ""
        if odd:
            raise ConfigError(f"{where} matches {text!r}, {odd}: that site would be left out "
                              "of the network without a word; restore or mount what it "
                              "stands for, or remove it, or narrow the pattern")


def _as_given(path) -> Path:
    """`path` made absolute without following symbolic links (``os.path.abspath``).

    A site config's relative ``[input] path`` is read from the folder of the config as
    given (:func:`fluxpart.io.read_site_config`); resolving a linked config to its
    target would read it from the target's folder in a batch but from the link's in
    ``fluxpart run``, and several links to one shared config would be one site.

    References
    ----------
    Linux man-pages, path_resolution(7) and symlink(7): a relative name found in a
    file's content is resolved by the program reading it, here against the folder of
    the path as given (m).
    """
    return Path(os.path.abspath(path))


def _is_network_file(path) -> bool:
    """True for a TOML file with a [batch] table: another network file beside the sites
    (network-2021.toml, network-2022.toml), which a glob does not list as a site."""
    try:
        return "batch" in read_toml(path, "site config")
    except FluxpartError:
        return False           # not readable here: listed, and its run names the fault


def _clean_key(text: str) -> str:
    """A folder name of ASCII letters, digits, ``._-`` from `text`, at most
    :data:`_KEY_LIMIT` bytes: a longer one is cut and ends in 8 hex digits of the SHA-256
    of the whole, so two long names that share their start stay apart."""
    key = re.sub(r"[^A-Za-z0-9._-]+", "_", text).strip("._") or "site"
    if len(key) <= _KEY_LIMIT:
        return key
    digest = hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()[:8]
    return f"{key[:_KEY_LIMIT - 9].rstrip('._')}-{digest}"


def _site_keys(configs: list[Path]) -> list[str]:
    """One folder name per site config: its stem, made distinct where stems clash.

    Keys are compared without case (``str.casefold``): the default file systems of
    macOS (APFS, HFS+) and Windows (NTFS) and SMB shares do not tell ``Fen`` from
    ``fen`` (common practice (m)), so ``a/Fen.toml`` and ``b/fen.toml`` would write
    one folder, and a site named ``Failures.parquet`` would land on the failures table.
    """
    stems = [_clean_key(config.stem) for config in configs]
    counts = Counter(stem.casefold() for stem in stems)
    reserved = {name.casefold() for name in _RESERVED_KEYS}
    keys, used = [], set()
    for config, stem in zip(configs, stems, strict=True):
        base = (stem if counts[stem.casefold()] == 1
                else _clean_key(f"{config.parent.name}-{config.stem}"))
        key, number = base, 2
        while key.casefold() in used or key.casefold() in reserved:
            key, number = f"{base}-{number}", number + 1
        used.add(key.casefold())
        keys.append(key)
    return keys


# --------------------------------------------------------------------------- one site

def _stale_reason(config, directory) -> str | None:
    """Return why `directory` does not hold the current result of `config`, or None."""
    from .io import read_site_config

    directory = Path(directory)
    if not (directory / "manifest.json").exists():
        return "new"
    try:
        manifest = read_manifest(directory)
    except InputFileError:
        return "manifest unreadable"
    provenance = manifest.get("provenance") or {}
    if manifest.get("format") != MANIFEST_FORMAT:
        return "manifest format changed"
    try:
        config_sha = file_sha256(config)
        input_sha = read_site_config(config).input_sha256()
        settings = Config.from_toml(config).to_dict()
    except (FluxpartError, OSError):
        return "site config or input unreadable"
    if (provenance.get("site_config") or {}).get("sha256") != config_sha:
        return "site config changed"
    if (provenance.get("input") or {}).get("sha256") != input_sha:
        return "input changed"
    if manifest.get("config") != settings:
        return _settings_reason(manifest.get("config"), settings)
    if manifest.get("versions") != library_versions():
        return "library versions changed"
    if (manifest.get("code") or {}).get("sha256") != code_fingerprint()["sha256"]:
        return "fluxpart code changed"
    tables = manifest.get("tables")
    if not isinstance(tables, dict) or "annual" not in tables:
        return "manifest lists no tables"
    for problem in check_folder(directory, manifest):
        if problem.kind in ("hash", "missing"):
            return f"table {problem.file!r} {'changed' if problem.kind == 'hash' else 'missing'}"
        return f"folder does not match its manifest ({problem.describe()})"
    return None


def _settings_reason(recorded, settings: dict) -> str:
    """Why the recorded settings `recorded` (a manifest's ``config``) are not `settings`
    (the site config's now): a setting added after the folder's release
    (:data:`fluxpart.config.ADDED_SETTINGS`) is named with the value that computed the
    folder and the value now; "settings changed" where a setting the folder records
    differs too, or where no added setting explains it.

    A folder of an earlier release reruns for a new result; "settings changed" alone
    read as an edit of the site config nobody made (leftovers54)."""
    added = [item for item in absent_added_settings(recorded) if item.name in settings]
    if not added:
        return "settings changed"
    named = ", ".join(f"{item.name} (added in {item.release}: the folder computed as "
                      f"{json.dumps(item.earlier)}, now {json.dumps(settings[item.name])})"
                      for item in added)
    rest = {key: value for key, value in settings.items()
            if key not in {item.name for item in added}}
    what = "a setting" if len(added) == 1 else "settings"
    return (f"{what} added since the folder's release: {named}" if rest == recorded
            else f"settings changed, and {what} added since the folder's release: {named}")


def is_up_to_date(config, directory) -> bool:
    """Tell whether `directory` already holds the current result of a site config.

    Parameters
    ----------
    config : str or path-like
        The site config (TOML).
    directory : str or path-like
        Its result folder (``manifest.json`` and the tables).

    Returns
    -------
    bool
        True when the manifest records the same site config SHA-256, the same
        input file SHA-256, the same resolved settings (:class:`fluxpart.Config`),
        the same library versions and code fingerprint as now, and the folder
        matches its manifest (seal, every table's SHA-256, no extra file).
        Rerunning such a site would give the same tables.
    """
    return _stale_reason(config, directory) is None


def _annual_from(directory: Path) -> tuple[pd.DataFrame, dict, tuple]:
    manifest = read_manifest(directory)
    annual = read_table(directory / manifest["tables"]["annual"]["file"])
    return annual, manifest["site"], tuple(manifest.get("warnings") or ())


def run_site(key: str, config, directory, *, force: bool = False) -> SiteOutcome:
    """Process one site config into its result folder: the work of one batch task.

    Parameters
    ----------
    key : str
        Site key, carried into the outcome.
    config : str or path-like
        The site config (TOML); give an absolute path when this runs on another
        process or machine (inputs travel as paths on a shared file system).
    directory : str or path-like
        The site's result folder, written as ``fluxpart run --out directory`` does.
    force : bool, optional
        Process even if the folder is up to date (:func:`is_up_to_date`).

    Returns
    -------
    SiteOutcome
        ``"written"`` or ``"skipped"`` with the annual budget read back from the
        folder, or ``"failed"`` with the error. Never raises: a failing site must
        not stop the others.
    """
    from .pipeline import process_site_config

    config, directory = Path(config), Path(directory)
    common = {"key": key, "config": str(config), "directory": str(directory)}
    try:
        reason = "forced" if force else _stale_reason(config, directory)
        if reason is None:
            tidy_skipped(directory)
            annual, site, notes = _annual_from(directory)
            return SiteOutcome(status="skipped", note="up to date", site=site, annual=annual,
                               warnings=notes, **common)
        with warnings.catch_warnings():
            # recorded in the manifest and listed per site by the batch summary, not
            # printed by Python's warnings module from whichever process ran the site
            warnings.simplefilter("ignore", FluxpartWarning)
            result = process_site_config(config)
        result.write(directory)
        annual, site, notes = _annual_from(directory)
        return SiteOutcome(status="written", note=reason, site=site, annual=annual,
                           warnings=notes, **common)
    except OSError as error:
        return _failure(common, vanished_config_error(config, error) or error)
    except Exception as error:  # isolate every site's failure
        return _failure(common, error)


def vanished_config_error(config: Path, error: OSError) -> InputFileError | None:
    """The one-line error of a site config that could not be read when its task ran.

    The batch lists its sites' configs when it starts; a task reads its config when a
    worker takes it up, seconds to hours later. A config removed, renamed or made
    unreadable in between (a tidy-up of a shared folder, a sync tool replacing the file,
    a site retired while the batch ran) failed the site with Python's
    ``FileNotFoundError`` and a 15-line traceback, as an internal error.

    Parameters
    ----------
    config : pathlib.Path
        The site config of the task.
    error : OSError
        The error raised while the site was processed.

    Returns
    -------
    InputFileError or None
        Naming the config, what the system said and the fix; None where `error`
        concerns another file (an input file, the result folder).

    References
    ----------
    ``open(2)``: ENOENT, EACCES and EISDIR name the path that could not be opened,
    which Python keeps as ``OSError.filename`` (m).
    """
    name = error.filename
    if name is None or os.fsdecode(name) != str(config):
        return None
    return InputFileError(
        f"the site config {str(config)!r} could not be read when its site's turn came "
        f"({error.strerror or type(error).__name__}): it was removed, moved or made "
        "unreadable after the batch listed its sites; restore it and run the batch again "
        "(sites up to date are skipped)")


def _checked_site(key: str, config, directory, *, force: bool = False,
                  client: dict | None = None) -> SiteOutcome:
    """A batch task: :func:`run_site`, on a worker whose code matches its client's.

    `client` is the client's :func:`fluxpart.worker_match.client_environment`; a
    worker running other code fails the site (``WorkerMismatchError``) before reading
    or writing anything. Dask sends this function by module and name, so a worker of
    0.24.0 or earlier, which lacks it, fails the task as it unpacks it
    (:func:`fluxpart.worker_match.older_worker_error`).
    """
    mismatch = mismatch_error(client)
    if mismatch is not None:
        return _failure({"key": key, "config": str(config), "directory": str(directory)},
                        mismatch)
    return run_site(key, config, directory, force=force)


def tidy_skipped(directory, wait: float = 0.0) -> list[str]:
    """Remove what a killed writer left beside a site folder that is up to date.

    Parameters
    ----------
    directory : str or path-like
        The site's result folder, found up to date (:func:`is_up_to_date`).
    wait : float, optional
        Seconds to wait for a writer holding the folder's lock (default 0: none).

    Returns
    -------
    list of str
        What was removed (:func:`fluxpart.resultdir.clean_leftovers`); empty where
        nothing was left, or where a writer holds the folder's lock now (its staging
        folder is its own).

    Notes
    -----
    A batch killed while a worker wrote a site (``kill -9``, a node lost) leaves the
    site's ``.KEY.staging-*`` folder beside it, a whole copy of a result. A rerun that
    found the site up to date skipped it without a word and left the copy for good;
    every verify of the site then said a run into it "is running now or was stopped"
    (only a run that rewrote the site removed it). A staging folder is made only under
    the folder's lock, so with the lock taken here (without waiting) none belongs to a
    writer running now.

    References
    ----------
    flock(2): an advisory lock is released when its holder's process ends, also by
    SIGKILL (m).
    """
    directory = Path(directory)
    if not interrupted_writes(directory):
        return []
    try:
        with folder_lock(directory, timeout=wait, notify=lambda text: None, remove=True):
            return clean_leftovers(directory)
    except (OutputError, OSError):
        return []                # held by a writer running now, or not ours to remove


def _failure(common: dict, error: BaseException) -> SiteOutcome:
    # a full disk or an unwritable folder is the output's, not the site's input (faults36)
    kind = ("output" if isinstance(error, OutputError)
            else "input" if isinstance(error, FluxpartError) else "internal")
    text = str(error) or repr(error)
    if isinstance(error, MemoryError):
        # a worker's memory limit (ulimit -v or -d, a container's, a batch job's): the
        # cluster's fault, told in one line; each site printed a 10-line traceback from
        # the OpenBLAS room check or pyarrow's ArrowMemoryError (faults38)
        text = (f"ran out of memory in the worker process ({str(error) or 'no detail'}): "
                "give the workers more memory (their limit: ulimit -v or -d, a container's "
                "or a batch job's)")
    trace = ("" if kind in ("input", "output") or isinstance(error, MemoryError)
             else "".join(traceback.format_exception(error)))
    # the first public class: a private subclass (the reader's _EmptyFileError) is no
    # name a user can look up or catch
    name = next(c.__name__ for c in type(error).__mro__ if not c.__name__.startswith("_"))
    return SiteOutcome(status="failed", note=f"{name}: {text}", error=name, message=text,
                       kind=kind, traceback=trace, **common)


# --------------------------------------------------------------------------- network tables

def _site_table(outcome: SiteOutcome, table: str) -> pd.DataFrame:
    """The site's budget `table` (``annual``, ``monthly`` or ``daily``) as written."""
    if table == "annual":
        return outcome.annual
    directory = Path(outcome.directory)
    return read_table(directory / read_manifest(directory)["tables"][table]["file"])


def _arrow_site(outcome: SiteOutcome, table: str = "annual") -> pa.Table:
    # without the table's attrs (its units and descriptions, which _unify writes anew):
    # pandas deep-copies them at every step below, a third of the CPU of the network
    # tables, built serially after every worker has finished (network56: 20 site-years
    # 0.69 -> 0.48 s; the schema's metadata is dropped below, so the bytes are the same)
    frame = pd.DataFrame(_site_table(outcome, table), copy=False)
    frame.attrs = {}
    flat = frame.reset_index()
    site = outcome.site or {}
    for position, (column, name) in enumerate(_SITE_FIELDS.items(), start=1):
        flat.insert(position, column, site.get(name))
    return pa.Table.from_pandas(flat, preserve_index=False).replace_schema_metadata(None)


def _year_start(outcome: SiteOutcome) -> str | None:
    """The site's [processing] year_start as its manifest records it (None: unreadable)."""
    try:
        config = read_manifest(Path(outcome.directory)).get("config") or {}
    except FluxpartError:
        return None
    return config.get("year_start", CALENDAR_YEAR_START) if isinstance(config, dict) else None


def _unify(tables: list[pa.Table], name: str = "annual",
           year_start: str | None = None) -> list[pa.Table]:
    """Give every site's table the union of columns (nulls where a site lacks one).

    `year_start` ("MM-DD"): the sites' common first day of the budget year, which the
    annual ``year`` and the time convention state; None where the sites differ (each
    its own, said so).
    """
    schema = pa.unify_schemas([table.schema for table in tables], promote_options="permissive")
    units = units_for_table(name, schema.names, year_start)
    units.update(_SITE_COLUMNS)
    fields = [pa.field(f.name, f.type, metadata={b"unit": units[f.name][0].encode(),
                                                 b"description": units[f.name][1].encode()})
              for f in schema]
    # units and descriptions in the file's key-value metadata too, as in a site's own
    # tables: DuckDB's parquet_kv_metadata and Polars' read_parquet_metadata see only these
    columns = {f.name: {"unit": units[f.name][0], "description": units[f.name][1]}
               for f in schema}
    # the partition column, which a Hive reader adds from the folder name: described like
    # the file's own (modeller52: it had no unit or description entry)
    columns["site"] = {"unit": _FAILURE_COLUMNS["site"][0],
                       "description": NETWORK_SITE_DESCRIPTION}
    info = {"table": NETWORK_DATASETS[name], "partitioning": "site",
            "time_convention": time_convention(year_start), "columns": columns}
    # and as the DataFrame.attrs pandas.read_parquet restores (the PANDAS_ATTRS key), as in
    # a site's own tables (round modeller23)
    meta = {b"fluxpart": json.dumps(info, sort_keys=True, ensure_ascii=False).encode(),
            PANDAS_ATTRS_KEY: json.dumps(reader_attrs(info), sort_keys=True,
                                         ensure_ascii=False).encode()}
    schema = pa.schema(fields, metadata=meta)
    out = []
    for table in tables:
        arrays = [table[f.name].cast(f.type) if f.name in table.column_names
                  else pa.nulls(len(table), f.type) for f in schema]
        out.append(pa.Table.from_arrays(arrays, schema=schema))
    return out


def _parquet_bytes(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink, compression="zstd", use_dictionary=False,
                   write_statistics=True, store_schema=True)
    return sink.getvalue().to_pybytes()


def _replace_folder(staging: Path, target: Path) -> None:
    old = None
    if target.exists():
        old = Path(tempfile.mkdtemp(prefix=f".{target.name}.old.", dir=target.parent))
        target.replace(old / target.name)
    staging.replace(target)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def _write_network(outcomes, out: Path) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Write the failures table and the network datasets of the sites that succeeded.

    First :data:`NETWORK_SEAL` is marked incomplete; the files follow; the seal is
    written last, naming each file's SHA-256 and each site folder's manifest seal,
    which :func:`read_network` checks. A batch stopped on the way leaves a seal
    that says incomplete or does not match, never a silent mix. Batches writing
    into the same `out` take turns (the lock file ``.network.json.lock`` in `out`).

    Returns
    -------
    annual : pandas.DataFrame
        The annual network table read back.
    failures : pandas.DataFrame
        The failures table.
    """
    # Two batches into one output folder would otherwise swap their network folders in
    # and out at the same moment: one failed, left a stray .old folder, or sealed the
    # other's files (two threads, 20 rounds: one FileNotFoundError). One at a time.
    with folder_lock(out / NETWORK_SEAL, remove=True):
        return _write_network_locked(outcomes, out)


def _write_network_locked(outcomes, out: Path) -> tuple[pd.DataFrame, pd.DataFrame]:
    _sweep_leftovers(out, locked=True)
    done = [o for o in outcomes if o.status != "failed"]
    atomic_write_bytes(out / NETWORK_SEAL, _seal_bytes({"format": _NETWORK_FORMAT,
                                                         "complete": False}))
    failures = _write_failures(outcomes, out)
    starts = {_year_start(o) for o in done}
    year_start = starts.pop() if len(starts) == 1 else None
    files = {}
    for name, folder in NETWORK_DATASETS.items():
        staging = Path(tempfile.mkdtemp(prefix=f".{folder}.", dir=out))
        files[folder] = {}
        try:
            set_mode(staging, folder_mode())  # mkdtemp makes it private (0700)
            tables = _unify([_arrow_site(o, name) for o in done], name,
                            year_start) if done else []
            for outcome, table in zip(done, tables, strict=True):
                data = _parquet_bytes(table)
                atomic_write_bytes(staging / f"site={outcome.key}" / "part-0.parquet", data)
                files[folder][outcome.key] = hashlib.sha256(data).hexdigest()
            _replace_folder(staging, out / folder)
        except BaseException:
            remove_folder(staging)      # also where a second Ctrl-C interrupts the removal
            raise
    sites = {o.key: {"folder": Path(os.path.relpath(o.directory, out)).as_posix(),
                     "seal": str(read_manifest(Path(o.directory)).get("seal"))} for o in done}
    atomic_write_bytes(out / NETWORK_SEAL, _seal_bytes({
        "format": _NETWORK_FORMAT, "complete": True, "sites": sites, "files": files,
        "failures": file_sha256(out / FAILURES_FILE)}))
    return network_table(out, "annual"), failures


def _seal_bytes(seal: dict) -> bytes:
    return (json.dumps(seal, indent=2, sort_keys=True) + "\n").encode()


def _write_failures(outcomes, out: Path) -> pd.DataFrame:
    # a path that is not UTF-8 (a name from another code page, carried as lone surrogates)
    # is shown with \xNN escapes: Arrow strings are UTF-8, and such a name in a failing
    # site's config path or message ended the whole batch in a traceback
    rows = [{name: shown_name(value) if isinstance(value, str) else value
             for name, value in {"site": o.key, "config": o.config, "error": o.error,
                                 "message": o.message, "kind": o.kind}.items()}
            for o in outcomes if o.status == "failed"]
    frame = pd.DataFrame({name: pd.Series([row[name] for row in rows], dtype="str")
                          for name in _FAILURE_COLUMNS})
    write_table(frame.set_index("site"), out / FAILURES_FILE, _FAILURE_COLUMNS, "failures")
    return frame


# --------------------------------------------------------------------------- the batch

#: Modules a local worker needs for a site task, imported once by the fork server.
_WORKER_PRELOAD = ("distributed", "fluxpart.batch", "fluxpart.io", "fluxpart.pipeline")


def _start_method(platform: str | None = None, available=None) -> str:
    """Return how the local cluster starts its worker processes.

    Parameters
    ----------
    platform : str, optional
        ``sys.platform``; default: this one.
    available : collection of str, optional
        The start methods the platform offers; default
        ``multiprocessing.get_all_start_methods()``.

    Returns
    -------
    str
        ``"forkserver"`` on Linux where it exists: one server process imports
        :data:`_WORKER_PRELOAD` once and each worker is forked from it, single-threaded,
        so workers start with fluxpart's modules already imported instead of
        importing (and, without a bytecode cache, compiling) them each. ``"spawn"``
        (Dask's default) elsewhere: Windows has no fork, and on macOS system
        libraries are not safe to fork, which is why Python spawns there.

    References
    ----------
    Python documentation, ``multiprocessing``, "Contexts and start methods"
    (Python 3.11).
    """
    import multiprocessing

    platform = sys.platform if platform is None else platform
    available = multiprocessing.get_all_start_methods() if available is None else available
    return "forkserver" if platform.startswith("linux") and "forkserver" in available else "spawn"


def _use_fork_server() -> None:
    """Give the fork server fluxpart's worker modules to import before it forks.

    Dask sets the fork server's preload list (its own packages) on its first
    request for a context, so the list is set after that request; it takes
    effect when the server starts, at the first worker of this process.
    """
    from distributed.utils import get_mp_context

    get_mp_context().set_forkserver_preload(list(_WORKER_PRELOAD))
    _start_fork_server_deaf()


def _start_fork_server_deaf() -> None:
    """Start the fork server with Ctrl-C ignored, so that neither it nor the workers it
    forks raise KeyboardInterrupt.

    A terminal's Ctrl-C reaches every process of the foreground group. The fork server
    ignores SIGINT only after importing its preload modules
    (``multiprocessing.forkserver.main``) and a worker only after its Dask preload
    (:func:`dask_setup`): Ctrl-C in the first 2-4 s of a batch printed the server's
    KeyboardInterrupt traceback. A signal ignored when a program is executed stays
    ignored in it, and Python then installs no KeyboardInterrupt handler. This process
    ignores SIGINT only while the server is spawned (``ensure_running`` returns once it
    is started, before its imports). A caller's own forkserver processes of the same
    Python process then ignore Ctrl-C too.

    References
    ----------
    POSIX.1-2017, exec: signals set to be ignored by the calling process image are
    ignored by the new process image (m). Python documentation, ``signal``: SIGINT is
    translated into KeyboardInterrupt only where its handler was the default at
    start-up (m).
    """
    import signal
    import threading
    from multiprocessing import forkserver

    if threading.current_thread() is not threading.main_thread():
        return
    previous = {signum: signal.signal(signum, signal.SIG_IGN) for signum in _group_stops()}
    try:
        forkserver.ensure_running()
    finally:
        for signum, handler in previous.items():
            signal.signal(signum, handler if handler is not None else
                          signal.default_int_handler if signum == signal.SIGINT else
                          signal.SIG_DFL)


def _group_stops() -> list:
    """The signals that reach every process of a batch's process group and that the
    batch process alone answers (closing the cluster, which ends the workers).

    SIGINT (a terminal's Ctrl-C), SIGHUP (the terminal or SSH session closed: the
    session's foreground group), SIGUSR1 and SIGUSR2 (a batch scheduler's warning before
    its time limit, sent to every process of the job: Slurm's ``--signal``) and SIGPWR.
    Their default action ended the fork server, Python's resource tracker and the workers
    outright: a closed SSH session or a scheduler's warning printed 51 lines (the
    tracker's "process died unexpectedly, relaunching" warnings and the workers'
    tracebacks) before the batch's one line (faults35). SIGTERM is not among them: the
    resource tracker ignores it already, and a cluster that closes its workers ends one
    that does not answer with it.

    References
    ----------
    POSIX, General Terminal Interface: INTR and a hang-up are sent to the foreground
    process group; Slurm ``sbatch --signal`` (sent to every task of the job) (m).
    """
    import signal

    names = ("SIGINT", "SIGHUP", "SIGUSR1", "SIGUSR2", "SIGPWR")
    return [getattr(signal, name) for name in names if hasattr(signal, name)]


def _leave_unstarted_clusters(earlier=()) -> None:
    """Leave a local cluster interrupted while starting to end with this process.

    Ctrl-C or SIGTERM while ``LocalCluster`` starts its workers: Dask's exit handler
    (``distributed.deploy.spec.close_clusters``) then closes the half-started cluster
    and fails an assertion on a worker still in status ``init`` (a 20-line traceback
    after the batch's one ``error:`` line), and the fork server, spared the signal
    (:func:`_start_fork_server_deaf`), went on forking workers for a client already
    gone, each printing a ``FileNotFoundError`` traceback. The cluster is left out of
    that handler (``shutdown_on_close``; clusters in `earlier`, the ids of a caller's
    own, are not touched), and the fork server this batch started is stopped; the workers already forked exit when their parent's pipe closes
    (``distributed.process.AsyncProcess``). Measured: Ctrl-C to the process group at 10
    offsets from 0.8 to 11 s into a 6-site batch, one line and nothing left running each
    time (36-49 lines of stderr at 2.5 and 3.5 s before).

    References
    ----------
    Dask ``distributed`` source, ``deploy/spec.py`` (``close_clusters`` skips a cluster
    whose ``shutdown_on_close`` is false) and ``process.py``
    (``_immediate_exit_when_closed``) (m).
    """
    import signal
    from multiprocessing import forkserver

    from distributed.core import Status
    from distributed.deploy.spec import SpecCluster

    for cluster in list(SpecCluster._instances):
        if (id(cluster) not in earlier
                and getattr(cluster, "status", None) != Status.closed):
            cluster.shutdown_on_close = False
    # the process is ending: the worker starts cut short by the stopped server are
    # reported by asyncio at exit ("Task exception was never retrieved", 40 lines)
    logging.getLogger("asyncio").setLevel(logging.CRITICAL)
    pid = getattr(forkserver._forkserver, "_forkserver_pid", None)
    if pid:
        try:
            os.kill(pid, signal.SIGKILL)
        except OSError:
            pass


def dask_setup(worker) -> None:
    """Dask worker preload: ignore Ctrl-C and take the loaded code's fingerprint.

    A terminal's Ctrl-C sends SIGINT to every process of the foreground process group,
    the local workers included: each printed a 30-line KeyboardInterrupt traceback
    before the batch's one line. The batch process alone answers it and closes the
    cluster, which ends the workers.

    Parameters
    ----------
    worker : distributed.Worker
        The worker starting (unused).

    References
    ----------
    POSIX, General Terminal Interface: INTR is sent to the foreground process group.
    Dask ``distributed`` documentation, "Preloading": ``dask_setup(worker)``.
    """
    import signal

    try:
        for signum in _group_stops():     # the batch process answers them for the group
            signal.signal(signum, signal.SIG_IGN)
    except ValueError:         # not the main thread of its process: nothing to protect
        pass
    # the fingerprint of the code this worker loaded, taken as it starts (about 4 ms): the
    # client's is taken as the batch starts, so an edit to the package's files while the
    # batch runs is not read as a worker of other code (fluxpart.worker_match)
    code_fingerprint()


def _check_cluster_options(scheduler, workers) -> None:
    """Refuse a missing Dask or bad worker options (before the output folder is made)."""
    try:
        import dask.distributed  # noqa: F401
    except ImportError:
        from .install_hints import install_command

        raise ConfigError("fluxpart batch needs Dask (dask[distributed]): install the batch "
                          f"extra with {install_command('batch')}") from None
    if workers is not None and (not isinstance(workers, int) or isinstance(workers, bool)
                                or workers < 1):
        raise ConfigError(f"--workers {workers!r}: expected a whole number >= 1")
    if scheduler is not None and not str(scheduler).strip():
        # an empty address (an unset shell variable: --scheduler "$ADDR") ran a local
        # cluster without a word, on the machine the user meant to spare (round faults45)
        raise ConfigError(f"--scheduler {scheduler!r}: an empty address; give the address "
                          "`dask scheduler` prints (tcp://HOST:8786 by default), or leave "
                          "--scheduler out for a local cluster")
    if scheduler and workers is not None:
        raise ConfigError("--workers applies to the local cluster only; with --scheduler "
                          "the cluster's own workers are used")
    if not scheduler:
        # before the output folder is made: an unusable scratch folder left a new, empty
        # --out behind its error line (round faults41)
        import dask

        scratch = scratch_folder_problem(dask.config.get("temporary-directory", None))
        if scratch:
            raise ConfigError(f"the local Dask cluster cannot start: {scratch}")


def scheduler_address_error(scheduler: str, error: BaseException) -> ConfigError:
    """The one-line error of a ``--scheduler`` address the batch cannot use.

    Parameters
    ----------
    scheduler : str
        The address as given.
    error : BaseException
        What Dask raised: a ``ValueError`` for an address it cannot parse (no port, an
        unknown scheme), a ``TypeError`` for ``tls://`` without Dask's TLS settings,
        an ``OSError`` or ``TimeoutError`` where nothing answered.

    Returns
    -------
    ConfigError
        Names the address, what was wrong with it and the fix. A malformed address was
        said to be a scheduler that "answered not within 10 s" (round faults44).
    """
    cause = f"{type(error).__name__}: {error}" if str(error) else type(error).__name__
    if isinstance(error, ValueError):
        return ConfigError(f"--scheduler {scheduler!r} is not a Dask scheduler address "
                           f"({cause}); write tcp://HOST:PORT (port 8786 by default)")
    if isinstance(error, TypeError):
        return ConfigError(f"--scheduler {scheduler!r}: Dask cannot open this address "
                           f"({cause}); a tls:// scheduler needs Dask's TLS settings "
                           "(distributed.comm.tls.* in its configuration)")
    return ConfigError(f"--scheduler {scheduler!r}: no Dask scheduler answered within "
                       f"{_CONNECT_TIMEOUT_SECONDS} s ({cause}); start one with `dask "
                       "scheduler`, or leave --scheduler out for a local cluster")


def check_scheduler(scheduler: str, seconds: float | None = None) -> None:
    """Refuse a ``--scheduler`` address where no Dask scheduler answers, within `seconds`.

    Asked before the output folder is made (an unreachable scheduler left a new, empty
    ``--out``), with one deadline for the connection and the answer: Dask's client
    waits for ever for the first answer of a service that accepts the connection but
    speaks no Dask (an HTTP server, an ssh port: the batch hung until killed; round
    faults44). The scheduler's ``identity`` is asked; an answer of another kind (the
    address of a worker) is refused too.

    Parameters
    ----------
    scheduler : str
        The address as given (``tcp://host:port``; other schemes are left to the client).
    seconds : float, optional
        The deadline [s]; default :data:`_CONNECT_TIMEOUT_SECONDS`.

    Raises
    ------
    ConfigError
        Naming the address and the fix.

    References
    ----------
    Dask.distributed documentation, "Foundations" (``rpc`` and a server's ``identity``
    handler) (m).
    """
    import asyncio

    from distributed.comm import parse_address
    from distributed.comm.registry import get_backend
    from distributed.core import rpc

    seconds = _CONNECT_TIMEOUT_SECONDS if seconds is None else seconds
    try:
        scheme = parse_address(scheduler)[0]
        get_backend(scheme)
    except ValueError as error:
        raise scheduler_address_error(scheduler, error) from None
    if scheme == "inproc":          # a cluster of this process, on its own event loop
        return

    async def ask():
        async with rpc(scheduler, timeout=seconds) as remote:
            return await remote.identity()

    try:
        identity = asyncio.run(asyncio.wait_for(ask(), seconds))
    except (OSError, TimeoutError, ValueError, TypeError) as error:
        raise scheduler_address_error(scheduler, error) from None
    except Exception as error:     # the service answered, but not in Dask's protocol
        raise ConfigError(f"--scheduler {scheduler!r}: what answered there is not a Dask "
                          f"scheduler ({type(error).__name__}); give the address `dask "
                          "scheduler` prints (tcp://HOST:8786 by default)") from None
    kind = identity.get("type") if isinstance(identity, dict) else None
    if kind != "Scheduler":
        raise ConfigError(f"--scheduler {scheduler!r}: what answered there is "
                          f"{'a Dask ' + str(kind) if kind else 'not a Dask scheduler'}, not "
                          "the scheduler; give the address `dask scheduler` prints "
                          "(tcp://HOST:8786 by default)")


def local_workers(workers, sites: int) -> int:
    """The processes a local cluster starts: `workers` (default 2), at most one per site.

    Each site is one task run by one single-threaded worker, so a worker beyond the
    number of sites never receives a task; it would only cost a process, its
    imports and its file handles (``--workers 1000`` for 3 sites started 1000
    processes on a 2-core machine and ended in a traceback when the process table
    or the open-file limit ran out).

    Parameters
    ----------
    workers : int or None
        The ``--workers`` given (>= 1), or None for the default.
    sites : int
        Sites of the network file.

    Returns
    -------
    int
        Worker processes to start (>= 1).

    References
    ----------
    Dask.distributed documentation, ``LocalCluster`` (one task per thread; common
    practice: no more workers than tasks).
    """
    wanted = workers or _DEFAULT_WORKERS
    return max(1, min(wanted, sites))


def _client(scheduler, workers, sites: int | None = None):
    """Return (client, cluster or None) for an address or a new local cluster."""
    _check_cluster_options(scheduler, workers)
    if sites is not None:
        workers = local_workers(workers, sites)
    import dask
    from dask.distributed import Client, LocalCluster

    if scheduler:
        try:
            return Client(scheduler, timeout=_CONNECT_TIMEOUT_SECONDS), None
        except (OSError, TimeoutError, ValueError, TypeError) as error:
            raise scheduler_address_error(scheduler, error) from None
    # Dask starts workers with MALLOC_TRIM_THRESHOLD_ set, which switches off glibc's
    # adaptive mmap threshold: the pipeline's many mid-sized arrays then cost about a
    # third more time per site (tests/benchmarks/bench_batch.py). Our own local
    # workers keep the C library's default; one thread per worker stays. Dask writes
    # the workers' variables into this process's environment too: put it back.
    # Dask's statistical profiler samples the task thread's stack every 10 ms for a
    # dashboard these local clusters do not serve; it took 15 % of the CPU of a
    # site (3 demo site-years in one worker: 10.2 s with it, 8.7 s without).
    # Workers fork from a server that has imported fluxpart where the platform allows it
    # (see _start_method): 2 workers started and one demo site each, 5.2-6.2 -> 4.4-4.9 s
    # CPU of all processes (the imports paid once, not per worker); the wall time gains
    # less on an idle machine, where spawned workers import side by side on two cores.
    method = _start_method()
    saved = dict(os.environ)
    try:
        with dask.config.set({"distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_":
                              None, "distributed.worker.profile.enabled": False,
                              "distributed.worker.preload": ["fluxpart.batch"],  # dask_setup
                              "distributed.worker.multiprocessing-method": method}):
            if method == "forkserver":
                _use_fork_server()
            from distributed.deploy.spec import SpecCluster
            earlier = {id(c) for c in SpecCluster._instances}   # a caller's own clusters
            try:
                cluster = LocalCluster(n_workers=workers or _DEFAULT_WORKERS,
                                       threads_per_worker=1,
                                       processes=True, host="127.0.0.1", dashboard_address=None,
                                       # the scheduler's own ERROR lines (a worker
                                       # that died, keys it could not gather) are
                                       # said per site by the batch summary
                                       silence_logs=logging.CRITICAL,
                                       # no dashboard, but the scheduler still serves HTTP
                                       # (health, metrics): on a free port, not on 8787, which
                                       # another cluster or batch may hold (Dask then warned
                                       # "Port 8787 is already in use" on stderr)
                                       scheduler_kwargs={"dashboard_address": "127.0.0.1:0"})
            except (OSError, TimeoutError, RuntimeError) as error:
                # out of processes, file handles or memory for the workers; no site has
                # been computed and nothing written but the (empty or earlier) --out
                raise OutputError(
                    f"the local Dask cluster of {workers or _DEFAULT_WORKERS} worker(s) could "
                    f"not start ({type(error).__name__}: {error}); give fewer --workers, or "
                    "raise the limit that ran out (`ulimit -n`, `ulimit -u`)") from None
            except BaseException:      # Ctrl-C, SIGTERM or SIGHUP while the workers start
                _leave_unstarted_clusters(earlier)
                raise
    finally:
        for name in set(os.environ) - set(saved):
            del os.environ[name]
        os.environ.update({k: v for k, v in saved.items() if os.environ.get(k) != v})
    try:
        return Client(cluster), cluster
    except BaseException:
        cluster.close()
        raise


def _close_client(client, cluster, client_log, level) -> None:
    """Close the client and the local cluster (None on an existing scheduler), then put
    the client log's level back."""
    try:
        client.close()
        if cluster is not None:
            cluster.close()
    finally:
        client_log.setLevel(level)


#: Seconds, in all, that a stopped batch waits for the locks of sites its ending local
#: workers still hold (a worker process killed as the cluster closes ends within a
#: fraction of a second here; a scheduler's grace before SIGKILL is commonly 30 s, Slurm
#: ``KillWait`` (m)).
_ENDING_WORKER_WAIT = 5.0


def _tidy_stopped_sites(out: Path, sites) -> list[str]:
    """Remove what the local workers of a stopped batch left beside its site folders.

    A worker ended while it wrote a site (SIGTERM to the whole job, as a scheduler's
    time limit sends it; ``kill -9``) leaves the site's ``.KEY.staging-*`` folder, a
    whole copy of a result, until a later batch or run of that site removes it; every
    ``verify`` of the site said meanwhile that a run into it "is running now or was
    stopped" (faults35: SIGTERM to every process of a 4-site batch left one). Called
    once the local cluster is closed. A worker killed by the same signal may still be
    ending then, its lock not yet released with its process (flock(2) (m)): the sites
    wait for their locks up to :data:`_ENDING_WORKER_WAIT` seconds in all; a site whose
    lock a writer holds longer is left to it (:func:`tidy_skipped`).

    Returns
    -------
    list of str
        What was removed.
    """
    removed, deadline = [], time.monotonic() + _ENDING_WORKER_WAIT
    for key, _config in sites:
        try:
            removed += tidy_skipped(out / key, wait=max(0.0, deadline - time.monotonic()))
        except Exception:         # the batch's own stop is what the user is told about
            continue
    return removed


def run_batch(sites_file, *, scheduler=None, workers=None, out=None, force=False,
              progress=None, site_time_limit=None) -> BatchReport:
    """Process every site of a network file on Dask and write the network tables.

    Parameters
    ----------
    sites_file : str or path-like
        The network file (``SITES.toml``, see :func:`read_sites_file`).
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:port``). Default: a
        local cluster of `workers` processes with one thread each, listening on
        127.0.0.1 only, without a dashboard, closed at the end.
    workers : int, optional
        Processes of the local cluster; 2 when omitted; never more than the
        sites (:func:`local_workers`).
    out : str or path-like, optional
        Batch output folder; default ``[batch] out`` of the network file.
    force : bool, optional
        Reprocess sites whose result folder is already up to date.
    progress : callable, optional
        Called as ``progress(outcome, finished, total)`` each time a site ends
        (``finished`` counts the sites ended so far, written, skipped or failed).
    site_time_limit : float, optional
        Minutes a site may run on its worker before it is taken for hung and failed
        (its task cancelled; a local cluster's worker is stopped with the cluster);
        default ``[batch] site_time_limit`` of the network file, else
        :data:`DEFAULT_SITE_TIME_LIMIT_MINUTES`.

    Returns
    -------
    BatchReport
        Per-site outcomes and the two network tables.

    Raises
    ------
    InputFileError, ConfigError
        For a bad network file, an unreachable scheduler or a bad worker count;
        bad site configs or inputs are not raised but reported per site.
    OutputError
        If `out` is a file, cannot be made or written in, or is (or lies in) a
        result folder (all checked before the cluster starts), or if the network
        tables cannot be written after the sites were.

    Notes
    -----
    Inputs travel as paths: every worker must see the client's file system (one
    machine or a shared file system). Each site's folder ``out/<key>`` is written
    by its task exactly as ``fluxpart run SITE.toml --out out/<key>`` does, so the
    tables are byte-identical to a single run. The network datasets,
    ``out/failures.parquet`` and their seal ``out/network.json`` are rewritten on
    every run and cover the sites of this network file only; what a killed batch
    left while writing them is removed at the start; a site that fails keeps whatever folder an earlier run
    left, but is left out of the network table. Local worker processes are spawned
    or, on Linux, forked from a server process (:func:`_start_method`); both import
    the calling script again, so a script that calls this function must do so under
    ``if __name__ == "__main__":``. The fork server starts with the first local
    cluster of a process and keeps that moment's environment variables for the
    workers of later clusters.
    """
    with _out_of_deleted_folder(sites_file, out):
        return _run_batch(sites_file, scheduler, workers, out, force, progress,
                          site_time_limit)


@contextmanager
def _out_of_deleted_folder(sites_file, out):
    """Run the block in the network file's folder where the current folder was deleted
    (a shell left in a folder another run replaced) and every path given is absolute;
    back in the deleted folder after it (through a descriptor opened on it).

    Python's multiprocessing asks for the current folder to start each process
    (``spawn.get_preparation_data`` calls ``os.getcwd``, which fails with ENOENT,
    getcwd(3) (m)): a batch of absolute paths ended in a FileNotFoundError, told as
    "the current folder no longer exists ... give absolute paths" (faults38). A
    relative path is left to fail as before: it has no folder to be found in.
    """
    try:
        os.getcwd()
        gone = False
    except FileNotFoundError:
        gone = True
    given = [Path(p) for p in (sites_file, out) if p is not None]
    if not gone or not all(p.is_absolute() for p in given):
        yield
        return
    here = os.open(".", os.O_RDONLY)
    try:
        os.chdir(Path(sites_file).parent)
        yield
    finally:
        os.fchdir(here)
        os.close(here)


def _run_batch(sites_file, scheduler, workers, out, force, progress,
               site_time_limit) -> BatchReport:
    """:func:`run_batch` in a current folder that exists."""
    code_fingerprint()               # the client's code as loaded now (fluxpart.worker_match)
    network = read_sites_file(sites_file)
    limit = (network.site_time_limit if site_time_limit is None
             else check_site_time_limit(site_time_limit, "--site-time-limit"))
    out = (Path(out) if out is not None else network.out).resolve()
    _check_out(out)
    require_owner_access()           # before a folder or a cluster is made
    _check_cluster_options(scheduler, workers)   # a usage error leaves no new folder
    if scheduler is not None:
        # blanks around an address (a quoted "$ADDR " or a pasted line): Dask refused a
        # leading blank as an "unknown address scheme ' tcp'" and took a trailing one
        # (review69); the address is the same with them or without
        scheduler = str(scheduler).strip()
    if scheduler:
        check_scheduler(scheduler)   # nor an unreachable scheduler (round faults44)
    _make_writable_out(out)          # before the cluster starts and any site is computed
    _sweep_leftovers(out)
    client, cluster = _client(scheduler, workers, len(network.sites))
    # the client logs its lost scheduler's reconnection tries as ERROR with tracebacks;
    # the sites it concerns are named by the batch summary (scheduler_lost_error)
    client_log = logging.getLogger("distributed.client")
    level = client_log.level
    client_log.setLevel(logging.CRITICAL)
    try:
        outcomes = _run_tasks(client, network.sites, out, force, progress, limit * 60.0)
    except BaseException:
        # stopped (SIGTERM, Ctrl-C, a scheduler's signal): the local workers end with the
        # cluster, and what one left beside the site it was writing is removed here
        try:
            _close_client(client, cluster, client_log, level)
        finally:
            if cluster is not None:
                _tidy_stopped_sites(out, network.sites)
        raise
    _close_client(client, cluster, client_log, level)
    outcomes = [settled_outcome(outcome) for outcome in outcomes]
    try:
        table, failures = _write_network(outcomes, out)
    except OSError as error:          # a full disk after the sites were written
        raise OutputError(f"writing the network tables in {str(out)!r} failed "
                          f"({error.strerror or error}); the site folders written are whole, "
                          "and a rerun skips them and rewrites the network tables") from None
    record_pairs = _same_record_pairs(outcomes)
    same_records = {frozenset(pair) for pair, *_ in record_pairs}
    return BatchReport(out=out, outcomes=tuple(outcomes), network=table, failures=failures,
                       warnings=tuple(same_input_sites(outcomes)
                                      + _same_records_warnings(record_pairs)
                                      + same_name_sites(outcomes, same_records)
                                      + different_settings_sites(outcomes)
                                      + swapped_input_sites(outcomes)
                                      + unlisted_site_folders(out, [k for k, _ in network.sites])))


def settled_outcome(outcome: SiteOutcome) -> SiteOutcome:
    """A site whose outcome was lost with the scheduler, as its folder now shows it.

    When the client loses its Dask scheduler (stopped, restarted, its node rebooted),
    every site not yet reported failed with :class:`SchedulerLostError`, also those a
    worker had finished, and the network tables were rewritten without them: a
    restarted scheduler left an empty network table that ``read_network`` returned
    without a word (measured: 4 site folders intact and current, the network table 0
    rows). A site whose folder holds the current result of its config
    (:func:`is_up_to_date`: same config, input, settings, libraries and code, every
    table as its manifest records) is now counted as up to date and enters the network
    tables; any other stays failed.

    Parameters
    ----------
    outcome : SiteOutcome
        One site's outcome as the tasks returned it.

    Returns
    -------
    SiteOutcome
        `outcome` itself, or a ``"skipped"`` outcome read from the site's folder.

    References
    ----------
    Dask.distributed documentation, "Futures": a client that loses its scheduler
    cancels every future it holds, whatever the workers did (m).
    """
    if outcome.status != "failed" or outcome.error != SchedulerLostError.__name__:
        return outcome
    try:
        if not is_up_to_date(outcome.config, outcome.directory):
            return outcome
        annual, site, notes = _annual_from(Path(outcome.directory))
    except (FluxpartError, OSError):
        return outcome
    return SiteOutcome(status="skipped", key=outcome.key, config=outcome.config,
                       directory=outcome.directory, site=site, annual=annual,
                       warnings=notes, note="up to date (its outcome was lost with the "
                       "scheduler; its folder holds the current result)")


def _input_hashes(directory: Path) -> tuple:
    """SHA-256 of the input file(s) a result folder records, in order (empty if none)."""
    return tuple(sha for _, sha in recorded_inputs(read_manifest(directory)))


def same_input_sites(outcomes) -> list[str]:
    """One warning per group of sites whose results were computed from the same input.

    A site config copied for a new tower with its ``[input] path`` left unchanged gives
    a second result of the first tower's records under the new name and place: the
    network tables then count that tower twice. Sites are compared by the SHA-256 of
    their input files as recorded in their manifests (written and up-to-date sites).
    """
    groups: dict[tuple, list[str]] = {}
    for outcome in outcomes:
        if outcome.status == "failed":
            continue
        try:
            hashes = _input_hashes(Path(outcome.directory))
        except (FluxpartError, OSError, ValueError):
            continue
        if hashes:
            groups.setdefault(hashes, []).append(outcome.key)
    return [f"sites {', '.join(repr(k) for k in keys)} were computed from the same input "
            f"file(s) (SHA-256 {hashes[0][:12]}...): the network tables count those records "
            f"{len(keys)} times; check [input] path in their site configs"
            for hashes, keys in groups.items() if len(keys) > 1]


def same_records_sites(outcomes) -> list[str]:
    """One warning per pair of sites of different input files holding the same NEE.

    A tower's file saved again by a spreadsheet, re-exported, or copied into a second
    tower's folder has other bytes than the first, so :func:`same_input_sites` passes it,
    while the network tables hold one tower's budget twice, the second under another
    tower's name (round mistakes27). Each site's measured NEE (``nee`` of its
    ``timeseries.parquet``) is digested day by day (:func:`fluxpart.shared_records.
    day_keys`); two sites sharing :data:`fluxpart.shared_records.MIN_SHARED_DAYS` days or
    more of identical values at identical stamps are named. Pairs of the same input
    files are left to :func:`same_input_sites`.

    Parameters
    ----------
    outcomes : iterable of SiteOutcome
        The batch's sites; failed ones are skipped, and a folder whose
        ``timeseries.parquet`` cannot be read is left out.

    Returns
    -------
    list of str
        One warning per pair of sites, naming both keys, the number of shared days and
        their first and last day.

    References
    ----------
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136:1-18: independent towers never write the same NEE record after
    record (m).
    """
    return _same_records_warnings(_same_record_pairs(outcomes))


def _same_record_pairs(outcomes) -> list:
    """The pairs of :func:`fluxpart.shared_records.shared_days` among `outcomes`' result
    folders, without the pairs of the same input files."""
    keys, hashes = {}, {}
    for outcome in outcomes:
        if outcome.status == "failed":
            continue
        directory = Path(outcome.directory)
        try:
            # on this thread (a thread the system refused hung or ended the batch's client)
            table = arrow_table(directory / "timeseries.parquet",
                                columns=["time", "nee"]).to_pandas(use_threads=False)
            hashes[outcome.key] = _input_hashes(directory)
            keys[outcome.key] = day_keys(table["time"].to_numpy(), table["nee"].to_numpy())
        except (FluxpartError, OSError, ValueError, TypeError, KeyError, pa.ArrowException):
            continue
    return [(pair, days, start, end) for pair, days, start, end in shared_days(keys)
            if not (hashes.get(pair[0]) and hashes.get(pair[0]) == hashes.get(pair[1]))]


def _same_records_warnings(pairs) -> list[str]:
    """The warning of :func:`same_records_sites` for each pair of :func:`_same_record_pairs`."""
    warnings = []
    for (first, second), days, start, end in pairs:
        warnings.append(
            f"sites {first!r}, {second!r} hold the same measured NEE, value for value at "
            f"the same stamps, on {days} days ({start:%Y-%m-%d} .. {end:%Y-%m-%d}), though "
            "read from different input files: two towers never measure the same flux (each "
            "half-hour carries a random error of tens of percent), so one file holds the "
            "other's records (a copy or a re-export put in the wrong folder) or one tower "
            "is listed twice: the network tables count those records twice; check [input] "
            "path in their site configs")
    return warnings


def same_name_sites(outcomes, same_records=()) -> list[str]:
    """One warning per group of sites of different inputs that carry the same [site] name.

    A site config copied for a new tower with its ``[input] path`` changed but its
    ``[site]`` table left as it was gives the new tower's budget under the first
    tower's name (and coordinates, which the clock check passes where the towers are
    near): the network tables then hold two rows of one name, which a reader joining
    them with other data by site name merges or overwrites. The site's key (the config's
    file stem) is not the name a published table shows. Names are compared as written in
    each manifest (``site.name``), after stripping spaces and ignoring case; sites of the
    same input files are left to :func:`same_input_sites`. Sites whose annual tables share
    no year are left alone too: one tower's record split into configs per year or per
    period (a new logger program, a changed set of columns) is one tower under one name,
    its rows told apart by year. Pairs of keys in `same_records` (sets of two keys whose
    measured NEE is the same, :func:`same_records_sites`) are one tower's records, named
    there, not two towers.

    Parameters
    ----------
    outcomes : iterable of SiteOutcome
        The batch's sites; failed ones and folders without a readable manifest are
        skipped.
    same_records : iterable of set, optional
        Pairs of site keys whose measured NEE is the same (:func:`same_records_sites`).

    Returns
    -------
    list of str
        One warning per group of sites sharing a name, naming the keys and the name.

    References
    ----------
    Unicode Standard, section 5.18 "Case Mappings": names compared after case folding
    (m); common practice: a network table joins other data by site name.
    """
    groups: dict[str, list[tuple[str, str, tuple, set | None]]] = {}
    targets: dict[str, str] = {}          # key -> the site config's real file
    for outcome in outcomes:
        if outcome.status == "failed":
            continue
        try:
            manifest = read_manifest(Path(outcome.directory))
            hashes = _input_hashes(Path(outcome.directory))
        except (FluxpartError, OSError, ValueError):
            continue
        name = (manifest.get("site") or {}).get("name") if isinstance(manifest, dict) else None
        if isinstance(name, str) and name.strip():
            groups.setdefault(" ".join(name.split()).casefold(), []).append(
                (outcome.key, name, hashes, _years(outcome)))
            targets[outcome.key] = os.path.realpath(str(outcome.config))
    return [f"sites {', '.join(repr(k) for k, _, _, _ in members)} carry the same [site] name "
            f"{members[0][1]!r} but were computed from different input files: the network "
            "tables hold one name for different towers; give each its own [site] name (and "
            f"check its latitude and longitude){_shared_config_note(members, targets)}"
            for members in groups.values() if _same_years_other_inputs(members, same_records)]


def _shared_config_note(members, targets: dict) -> str:
    """The advice where the sites of one name read one site config through links.

    Links to one shared config in each tower's folder (each reading its own input, kept
    since round review30) give every tower that config's one ``[site]`` table: its name
    cannot differ without a config of its own per tower (round review31).
    """
    shared = {targets.get(key) for key, _, _, _ in members}
    if len(shared) != 1 or None in shared:
        return ""
    return (f": they read one site config through links ({shared.pop()}), so each tower "
            "needs a site config of its own for its [site] table (copy the shared one "
            "into each tower's folder)")


#: Settings that belong to one site by nature, left out of :func:`different_settings_sites`:
#: the dates of its own harvests or fires, and the budget year (a southern site's starts
#: in July while a northern one's starts in January, common practice). The seed too
#: (polish49): it draws the bootstrap and Monte Carlo samples, not the method, so sites of
#: different seeds are computed alike, each interval as valid as with any other seed; what
#: an auditor needs is the seed of a rerun equal to its original's, which ``verify`` takes
#: from the manifest and ``diff`` names where two folders differ in it.
_SITE_OWN_SETTINGS = ("events", "year_start", "seed")


def different_settings_sites(outcomes) -> list[str]:
    """At most one warning naming the [processing] settings that differ between sites.

    A network's sites are compared with each other, so their budgets are meant to be
    computed alike: a setting tried at one tower (a fixed u* threshold, another gap-fill
    estimate, another respiration form) and left in its config, or a config copied from
    an older template, computes that site otherwise without a word, while the network
    tables put its sums beside the others' (round mistakes21). Sites are compared by the
    resolved settings their manifests record (``config``; written and up-to-date sites),
    every setting except those of :data:`_SITE_OWN_SETTINGS`. For each differing setting
    the sites of each value are named (at most three settings, then a count).
    """
    configs: dict[str, dict] = {}
    for outcome in outcomes:
        if outcome.status == "failed":
            continue
        try:
            manifest = read_manifest(Path(outcome.directory))
        except (FluxpartError, OSError, ValueError):
            continue
        config = manifest.get("config") if isinstance(manifest, dict) else None
        if isinstance(config, dict):
            configs[outcome.key] = config
    if len(configs) < 2:
        return []
    names = sorted({name for config in configs.values() for name in config}
                   - set(_SITE_OWN_SETTINGS))
    differing = []
    for name in names:
        values: dict[str, list[str]] = {}
        for key, config in configs.items():
            values.setdefault(json.dumps(config.get(name), sort_keys=True), []).append(key)
        if len(values) > 1:
            shown = "; ".join(f"{value} at {', '.join(repr(k) for k in keys)}"
                              for value, keys in values.items())
            differing.append(f"{name} ({shown})")
    if not differing:
        return []
    more = f" and {len(differing) - 3} more" if len(differing) > 3 else ""
    return [f"sites differ in [processing] settings: {', '.join(differing[:3])}{more}; the "
            "network tables put their budgets side by side as if computed alike: check that "
            "each difference is meant for that site (a setting tried at one tower and left "
            "in its config, or a config copied from an older template, computes it otherwise)"]


def swapped_input_sites(outcomes) -> list[str]:
    """One warning per pair of sites whose input files look swapped (round mistakes46).

    Each site's Rg (``rg`` of its ``timeseries.parquet``) is compared with the day
    lengths of its own ``[site]`` latitude and of the other's
    (:func:`fluxpart.swapped_sites.swapped_pairs`): two towers less than 10° apart pass
    each site's own latitude check with each other's records. Failed sites and folders
    that cannot be read are left out.

    References
    ----------
    Allen, R. G. et al. (1998). FAO Irrigation and Drainage Paper 56, eq. 34 (day
    length from latitude and season).
    """
    records = {}
    for outcome in outcomes:
        if outcome.status == "failed":
            continue
        directory = Path(outcome.directory)
        try:
            site = read_manifest(directory).get("site") or {}
            table = arrow_table(directory / "timeseries.parquet",
                                columns=["time", "rg"]).to_pandas(use_threads=False)
            index = pd.DatetimeIndex(table["time"])
            steps = np.diff(index.to_numpy()) / np.timedelta64(1, "m")
            interval = float(np.median(steps)) if steps.size else 0.0     # [min]
            position = tuple(float(site[name]) for name in
                             ("latitude", "longitude", "utc_offset"))
        except (FluxpartError, OSError, ValueError, TypeError, KeyError, pa.ArrowException):
            continue
        if interval > 0:
            records[outcome.key] = (index, table["rg"].to_numpy(dtype=float), *position,
                                    interval)
    return [f"sites {first!r} (latitude {records[first][2]:g}), {second!r} (latitude "
            f"{records[second][2]:g}): the day lengths of each one's Rg fit the other's "
            f"latitude (their mismatch with the sun swings {other_first:.0f} and "
            f"{other_second:.0f} min through the year there, {own_first:.0f} and "
            f"{own_second:.0f} min at their own): their input files look swapped, each "
            "budget the other tower's under the wrong name; check [input] path in their "
            "site configs"
            for (first, second), own_first, other_first, own_second, other_second
            in swapped_pairs(records)]


def _years(outcome) -> set | None:
    """The years of an outcome's annual table, or None where it has none to read."""
    annual = getattr(outcome, "annual", None)
    if not isinstance(annual, pd.DataFrame) or annual.empty:
        return None
    try:
        return {int(year) for year in annual.index}
    except (TypeError, ValueError):
        return None


def _same_years_other_inputs(members, same_records=()) -> bool:
    """Whether two of `members` (key, name, input hashes, years) come from different
    inputs and share a year (or one's years are unknown), their records not the same
    (a pair of keys in `same_records`)."""
    for i, (key, _, hashes, years) in enumerate(members):
        for other_key, _, other_hashes, other_years in members[i + 1:]:
            if frozenset((key, other_key)) in same_records:
                continue
            if hashes != other_hashes and (years is None or other_years is None
                                           or years & other_years):
                return True
    return False


def _check_out(out: Path) -> None:
    """Refuse a batch output folder that is a file or is (or lies in) a result folder.

    The batch writes site folders, network datasets and ``failures.parquet`` into
    `out`; inside a result folder they would be files its manifest does not list,
    so ``load``, ``verify`` and ``diff`` would refuse that result afterwards.
    """
    if out.exists() and not out.is_dir():
        raise OutputError(f"batch output folder {str(out)!r} is an existing file, not a "
                          "folder; choose another --out or [batch] out")
    for folder in (out, *out.parents):
        if (folder / MANIFEST_FILE).is_file():
            where = "is" if folder == out else "is inside"
            raise OutputError(f"batch output folder {str(out)!r} {where} the result folder "
                              f"{str(folder)!r}, which must hold only the files its manifest "
                              "lists; choose another --out or [batch] out outside it")


def unlisted_site_folders(out, keys) -> list[str]:
    """A warning naming the result folders in `out` of sites the network file no longer lists.

    A site taken out of the network file (or renamed, or whose key changed) keeps the
    folder an earlier batch wrote; the network tables leave it out, but the folder
    looks as current as the others. Empty list where there is none.

    Parameters
    ----------
    out : path-like
        The batch output folder.
    keys : iterable of str
        The site keys of this run's network file.

    Returns
    -------
    list of str
        At most one warning text.
    """
    listed = set(keys)
    try:
        found = sorted(entry.name for entry in Path(out).iterdir()
                       if entry.name not in listed and not entry.name.startswith(".")
                       and (entry / MANIFEST_FILE).is_file())
    except OSError:
        return []
    if not found:
        return []
    shown = ", ".join(repr(name) for name in found[:5]) + (" ..." if len(found) > 5 else "")
    return [f"{len(found)} result folder(s) in {str(out)!r} belong to no site of this network "
            f"file ({shown}: an earlier batch's sites, since removed, renamed or re-keyed): "
            "kept, but left out of the network tables; delete them if they are not wanted"]


def _make_writable_out(out: Path) -> None:
    """Make the batch output folder and check that files can be written in it.

    Raises
    ------
    OutputError
        If `out` cannot be made or written in (a read-only place, no permission, an
        immutable folder): said before any site is computed, not after all of them.
    """
    try:
        out.mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryFile(dir=out):
            pass
    except OSError as error:          # a file on the way, a read-only place
        raise OutputError(f"batch output folder {str(out)!r} cannot be written "
                          f"({error.strerror or error}); choose another --out or "
                          "[batch] out") from None


#: Staging folders of the network datasets (``.network_annual.xxxxxxxx`` and the old copy
#: ``.network_annual.old.xxxxxxxx`` of :func:`_replace_folder`) and temporary files of
#: ``failures.parquet``, as a batch killed while writing them leaves them.
_LEFTOVER = re.compile(
    rf"^\.(?:(?:{'|'.join(map(re.escape, NETWORK_DATASETS.values()))})\.(?:old\.)?"
    rf"[a-z0-9_]{{8}}|{re.escape(FAILURES_FILE)}\.[a-z0-9_]{{8}}\.tmp)$")


def _sweep_leftovers(out: Path, *, locked: bool = False) -> list[str]:
    """Remove what a killed batch left while writing its network tables in `out`: entries
    matching :data:`_LEFTOVER` (:func:`fluxpart.store.remove_stale`). Returns their names.

    Only under the lock of the network tables (held by the caller where `locked`, else
    taken without waiting; nothing is swept while another batch holds it: that batch
    writes them now, and sweeps itself). Every such entry is then a leftover, whatever
    its modification time. Judged by that time against this batch's start, the staging
    folder of a batch writing its network tables as this one began was swept, and that
    batch failed; one dated ahead of the clock (a file server's) was kept for good
    (round faults27).
    """
    if locked:
        return remove_stale(out, _LEFTOVER)
    try:
        with folder_lock(out / NETWORK_SEAL, timeout=0, remove=True):
            return remove_stale(out, _LEFTOVER)
    except OutputError:             # another batch writes the network tables now
        return []


def _executing_keys(dask_worker) -> list:
    """Keys of the tasks running on a worker now (run on each worker by the client)."""
    return list(dask_worker.active_threads.values())


def _running_now(client, timeout: float = _ASK_WORKERS_SECONDS) -> set:
    """Keys of the tasks running on any worker now.

    Parameters
    ----------
    client : dask.distributed.Client
        The batch's client.
    timeout : float, optional
        Seconds to wait for the workers' answer (:data:`_ASK_WORKERS_SECONDS`).

    Returns
    -------
    set of str
        The keys each worker says it executes. Where the workers do not answer in
        `timeout` (a frozen worker: ``Client.run`` waits for every worker and, without a
        limit, waited without end, so neither the site time limit nor the no-worker
        note could fire), the keys the scheduler has given to workers to process
        (``Client.processing``): a task given to a frozen worker is charged its time. An
        empty set where the scheduler cannot be asked either (the tasks' own failure
        tells).

    References
    ----------
    Dask.distributed documentation, ``Client.run`` (runs on every worker and gathers the
    answers) and ``Client.processing`` (the tasks the scheduler has assigned to each
    worker) (m); ``callback_timeout`` of the client's synchronous calls (m).
    """
    try:
        answers = client.run(_executing_keys, on_error="return", callback_timeout=timeout)
    except Exception:  # a frozen worker (TimeoutError), a lost worker or scheduler
        try:
            assigned = client.processing()
        except Exception:
            return set()
        return {str(key) for keys in (assigned or {}).values() for key in keys}
    return {key for keys in answers.values() if isinstance(keys, list) for key in keys}


def _worker_count(client) -> int | None:
    """How many workers of the cluster can start a site now; None where the scheduler
    cannot be asked.

    A worker Dask has paused (its process above ``distributed.worker.memory.pause``, 80 %
    of its memory limit, e.g. ``dask worker --memory-limit`` below what fluxpart's imports
    take) starts no task until its memory falls, which an idle worker's never does: a
    batch on such workers waited without a word and without end (round faults41), as on
    a cluster without workers. Closing workers count as gone.

    References
    ----------
    Dask.distributed documentation, "Worker Memory Management": the pause threshold (m).
    """
    try:
        workers = client.scheduler_info(n_workers=-1)["workers"].values()
    except TypeError:       # a Dask release before scheduler_info(n_workers=)
        try:
            workers = client.scheduler_info()["workers"].values()
        except Exception:
            return None
    except Exception:  # a lost scheduler: the tasks' own failure tells
        return None
    return sum(1 for worker in workers if _worker_can_run(worker.get("status")))


def _worker_can_run(status) -> bool:
    """A worker of this status (``scheduler_info``'s, a string or None) starts tasks."""
    return str(status or "running").rsplit(".", 1)[-1] not in _IDLE_WORKER_STATES


def _no_worker_note(since: float | None, now: float, address: str) -> str | None:
    """The note for a cluster without any worker since `since` [s, monotonic], or None.

    With an existing cluster (``--scheduler``) whose workers all died (a node rebooted,
    the job queue ended their jobs, ``kill -9``), Dask's scheduler keeps the sites
    queued until a worker joins, and the batch waited without a word and without end
    (the site time limit counts only running sites).

    Parameters
    ----------
    since : float or None
        When the cluster was first seen without a worker (``time.monotonic``), or None
        while it has one.
    now : float
        The time now, on the same clock [s].
    address : str
        The scheduler's address, named in the note.

    Returns
    -------
    str or None
        The note once the cluster has been without a worker for
        :data:`_NO_WORKER_NOTE_SECONDS`, else None.

    References
    ----------
    Dask.distributed documentation, "Scheduling Policies" and "Adaptive deployments":
    tasks wait on the scheduler until a worker can run them (m).
    """
    if since is None or now - since < _NO_WORKER_NOTE_SECONDS:
        return None
    return (f"note: the Dask cluster at {address} has had no worker able to start a site "
            f"for {now - since:.0f} s (all lost, not yet started, or paused by Dask at their "
            "memory limit: give workers more memory, e.g. `dask worker --memory-limit`); the "
            "sites still to do wait on its scheduler until a worker can take them: start "
            "workers on it, or stop the batch (Ctrl-C) and run it again later (finished "
            "sites are kept and skipped)")


def _run_tasks(client, sites, out: Path, force: bool, progress,
               time_limit: float = DEFAULT_SITE_TIME_LIMIT_MINUTES * 60.0
               ) -> list[SiteOutcome]:
    """Run every site as a task; a site running longer than `time_limit` [s] fails.

    The limit counts from when the client first sees the site's task running on a
    worker (polled every :data:`_POLL_SECONDS`), not from its submission: a site
    queued behind others is not charged for their time.
    """
    from dask.distributed import wait

    futures, run = {}, uuid.uuid4().hex[:8]
    environment = client_environment()   # each worker compares its own code with it
    for position, (key, config) in enumerate(sites):
        future = client.submit(_checked_site, key, str(config), str(out / key), force=force,
                               client=environment, key=f"fluxpart-site-{key}-{run}")
        futures[future] = (position, key, config)
    outcomes = [None] * len(sites)
    pending, started, finished = set(futures), {}, 0
    workerless, noted = None, False

    def end(future, outcome):
        nonlocal finished
        position = futures[future][0]
        outcomes[position] = outcome
        pending.discard(future)
        finished += 1
        if progress is not None:
            progress(outcome, finished, len(sites))

    while pending:
        try:
            done, _ = wait(list(pending), timeout=_POLL_SECONDS, return_when="FIRST_COMPLETED")
        except TimeoutError:
            done = set()
        except CancelledError as error:
            # the client lost its scheduler (Dask cancels every future it holds): what is
            # still pending cannot come back; said per site, the finished sites kept
            address = getattr(getattr(client, "scheduler", None), "address", "?")
            for future in sorted(pending, key=lambda f: futures[f][0]):
                position, key, config = futures[future]
                end(future, _failure({"key": key, "config": str(config),
                                      "directory": str(out / key)},
                                     scheduler_lost_error(str(address), error)))
            break
        for future in sorted(done, key=lambda f: futures[f][0]):
            position, key, config = futures[future]
            try:
                outcome = future.result()
            except CancelledError as error:  # cancelled by Dask: its scheduler was lost
                address = getattr(getattr(client, "scheduler", None), "address", "?")
                outcome = _failure({"key": key, "config": str(config),
                                    "directory": str(out / key)},
                                   scheduler_lost_error(str(address), error))
            except Exception as error:  # a lost worker fails its site only
                common = {"key": key, "config": str(config), "directory": str(out / key)}
                older = older_worker_error(error)
                outcome = (_failure(common, older) if older is not None
                           else _lost_site(_failure(common, error), error))
            end(future, outcome)
        if not pending:
            break
        now = time.monotonic()
        if not noted:
            count = _worker_count(client)
            workerless = (workerless or now) if count == 0 else None
            address = getattr(getattr(client, "scheduler", None), "address", "?")
            note = _no_worker_note(workerless, now, str(address))
            if note:
                print(note, file=sys.stderr, flush=True)
                noted = True
        running = _running_now(client)
        for future in sorted(pending, key=lambda f: futures[f][0]):
            if future.key in running:
                started.setdefault(future.key, now)
            if future.key in started and now - started[future.key] > time_limit:
                position, key, config = futures[future]
                future.cancel()
                end(future, _failure(
                    {"key": key, "config": str(config), "directory": str(out / key)},
                    SiteTimeLimitError(
                        f"still running after {time_limit / 60.0:g} min ([batch] "
                        "site_time_limit, --site-time-limit): taken for hung and stopped; "
                        "its folder keeps what an earlier run left (nothing half-written). "
                        "Check that its input can be read (a network share that stopped "
                        "answering), or raise the limit for a very long record")))
    return outcomes


def _lost_site(outcome: SiteOutcome, error: BaseException) -> SiteOutcome:
    """The outcome of a site whose worker processes died while computing it.

    Dask retries such a task on other workers (``distributed.scheduler.allowed-failures``,
    3 by default) and then fails it with ``KilledWorker``; its traceback is the client's
    and tells nothing of the site. Said in the trade's words instead, without the trace:
    the usual causes are the kernel's out-of-memory killer, Dask's nanny restarting a
    worker above 95 % of its memory limit (``distributed.worker.memory.terminate``; an
    existing cluster's ``dask worker --memory-limit`` below a site's need: it named only
    ``--workers``, which such a cluster has not, round faults41) and a crash of native code.
    Peak memory of ``run`` from ``bench_commands.py`` (DEVELOPERS.md, release 0.32.0).
    """
    if type(error).__name__ != "KilledWorker":
        return outcome
    from dataclasses import replace

    message = ("the worker process computing this site died each time it was tried (killed: "
               "out of memory and the kernel's OOM killer or Dask's nanny at the worker's "
               "memory limit, a kill -9, a crash of native code); its folder keeps what an "
               "earlier run left (nothing half-written). Run the batch again; if memory ran "
               "out, with fewer --workers (a local cluster) or workers given more memory "
               "(`dask worker --memory-limit`; `run` peaks near 0.2 GB for one site-year, "
               "0.5 GB for ten)")
    return replace(outcome, error="WorkerLostError", message=message,
                   note=f"WorkerLostError: {message}", traceback="")


class SchedulerLostError(FluxpartError):
    """A batch's client lost its Dask scheduler before a site's outcome came back."""


def scheduler_lost_error(address: str, error: BaseException) -> SchedulerLostError:
    """The error of a site whose outcome was lost with the scheduler's connection.

    Parameters
    ----------
    address : str
        The scheduler's address, named in the message.
    error : BaseException
        Dask's error (``FuturesCancelledError``, reason ``scheduler-connection-lost``);
        its text is a traceback's, so only its kind is kept.

    Returns
    -------
    SchedulerLostError
        Names the scheduler, what the site's folder holds and the fix.

    Notes
    -----
    When the client's connection to the scheduler ends (the scheduler process stopped
    or was killed, its node rebooted, the network between failed), Dask cancels every
    future the client holds and the client's ``wait`` raises ``CancelledError``; the
    batch ended in that traceback (exit 1) and wrote no network table. A worker may
    still finish a site it was computing: the site's folder is written whole or not at
    all (:func:`fluxpart.resultdir.swapped_in`), so it holds the earlier result or a
    complete new one, and a rerun skips it where it is up to date.

    References
    ----------
    Dask.distributed documentation, "Managing Computation" (futures of a client are
    cancelled when it loses its scheduler) (m).
    """
    return SchedulerLostError(
        f"the connection to the Dask scheduler at {address} was lost before this site's "
        f"outcome came back ({type(error).__name__}: the scheduler stopped, or the network "
        "to it failed); its folder keeps what an earlier run left or holds a complete new "
        "result (never half-written). Start the scheduler again and rerun the batch: sites "
        "up to date are skipped")


class SiteTimeLimitError(FluxpartError):
    """A batch site ran longer than ``[batch] site_time_limit`` and was stopped."""


# --------------------------------------------------------------------------- command line

class _SiteProgress:
    """Sites ended/total, failed and remaining on one terminal line (stderr).

    Uses :class:`fluxpart.progress.Progress` where present, else a plain line.
    """

    def __init__(self, total: int, stream):
        self.total, self.stream, self.failed = total, stream, 0
        self._width = len(str(total))
        try:
            from .progress import Progress
        except ImportError:
            self._bar = None
        else:
            self._bar = Progress(total, self._label(), stream=stream, enabled=True)
        self._show(0)

    def _label(self, ended: int = 0) -> str:
        return (f"fluxpart batch, sites ({self.failed} failed, "
                f"{self.total - ended:>{self._width}} remaining)")

    def _show(self, ended: int) -> None:
        if self._bar is None:
            self.stream.write(f"\r{self._label(ended)}: {ended}/{self.total}")
            self.stream.flush()
        elif ended == 0:
            self._bar.__enter__()

    def __call__(self, outcome, finished, total):
        self.failed += outcome.status == "failed"
        if self._bar is None:
            self._show(finished)
        else:
            self._bar.label = self._label(finished)
            self._bar.advance()

    def close(self) -> None:
        if self._bar is None:
            self.stream.write("\n")
            self.stream.flush()
        else:
            self._bar.close()


def _summary(report: BatchReport) -> str:
    lines = [f"fluxpart batch: {len(report.outcomes)} site(s): {report.written} processed, "
             f"{report.skipped} up to date (skipped), {report.failed} failed"]
    # why a site whose folder existed was processed again: a rerun that printed "3
    # processed" after an upgrade or an edit left the user guessing (review49)
    again = [f"{outcome.key} ({outcome.note})" for outcome in report.outcomes
             if outcome.status == "written" and outcome.note not in ("", "new")]
    if again:
        lines.append(f"processed again, the folder not up to date: {'; '.join(again)}")
    if len(report.network):
        columns = [c for c in _SUMMARY_COLUMNS if c in report.network.columns]
        lines += ["", "Annual budgets [g C m-2; NEE < 0 is net uptake; nee_ci95_low/high: "
                  "its stated 95 % interval, systematic measurement errors not included (see "
                  "the README's cautions); ustar_threshold in m s-1]:",
                  report.network[columns].to_string(
                      index=False, float_format=lambda v: f"{v:9.1f}",
                      # u* thresholds in m s-1 need their three decimals (0.177, not 0.2)
                      formatters={"ustar_threshold": lambda v: f"{v:9.3f}"})]
    lines += [f"warning: {warning}" for warning in report.warnings]
    lines += [f"warning: site {outcome.key!r}: {text}" for outcome in report.outcomes
              for text in outcome.warnings]
    datasets = ", ".join(f"{folder}/" for folder in NETWORK_DATASETS.values())
    lines += ["", f"Wrote {shown_path(f'{report.out}/')} (one result folder per site, {datasets}, "
              f"{FAILURES_FILE})", f"Caution: {CAUTION}"]
    return "\n".join(lines)


def command_batch(args) -> int:
    """Run ``fluxpart batch``; return 0 when every site succeeded, 1 when any failed.

    Parameters
    ----------
    args : argparse.Namespace
        ``sites`` (the network file), ``scheduler`` (address or None), ``workers``
        (int or None), ``out`` (folder or None), ``force`` and ``quiet`` (bool).

    Notes
    -----
    Inputs travel as paths: with ``--scheduler`` the workers must share the
    client's file system. A bad network file, worker count or scheduler address
    raises :class:`~fluxpart.errors.ConfigError`, which the command line prints
    with exit status 2. Progress (sites done, failed, remaining) goes to stderr
    only when it is a terminal and ``--quiet`` is not given.
    """
    network = read_sites_file(args.sites)
    show = not args.quiet and sys.stderr.isatty()
    counter = _SiteProgress(len(network.sites), sys.stderr) if show else None
    try:
        report = run_batch(args.sites, scheduler=args.scheduler, workers=args.workers,
                           out=args.out, force=args.force, progress=counter,
                           site_time_limit=getattr(args, "site_time_limit", None))
    finally:
        if counter is not None:
            counter.close()
    print(_summary(report))
    for line in _failure_lines(report.outcomes):
        print(line, file=sys.stderr)
    return report.exit_code


def _failure_lines(outcomes) -> list[str]:
    """The ``error:`` lines of the failed sites: one per site, or one for the sites that
    failed alike.

    Sites that failed with the same error and message and no traceback (a lost Dask
    scheduler fails every pending site in the same words) are told in one line naming
    their count and each site with its config, in the order of `outcomes`; a site with
    a traceback (an internal error) keeps its own line and the traceback. An external
    scheduler killed printed its line once per lost site (round faults40).

    Parameters
    ----------
    outcomes : sequence of SiteOutcome
        The batch's outcomes; only ``status == "failed"`` ones are told.

    Returns
    -------
    list of str
        The lines (a traceback is one entry of several lines).
    """
    failed = [o for o in outcomes if o.status == "failed"]
    groups: dict = {}
    for outcome in failed:
        if not outcome.traceback:
            groups.setdefault((outcome.error, outcome.message), []).append(outcome)
    lines, told = [], set()
    for outcome in failed:
        group = groups.get((outcome.error, outcome.message), [outcome])
        if outcome.traceback or len(group) == 1:
            lines.append(f"error: site {outcome.key!r} ({outcome.config}): {outcome.error}: "
                         f"{outcome.message}")
            if outcome.traceback:
                lines.append(outcome.traceback)
        elif (outcome.error, outcome.message) not in told:
            told.add((outcome.error, outcome.message))
            named = ", ".join(f"{o.key!r} ({o.config})" for o in group)
            lines.append(f"error: {len(group)} sites failed alike, {named}: {outcome.error}, "
                         f"each: {outcome.message}")
    return lines
