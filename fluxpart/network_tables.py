"""Reading a batch's network tables back, checked against the seal the batch wrote last.

A batch output folder (:mod:`fluxpart.batch`) holds ``network_annual/``,
``network_monthly/`` and ``network_daily/`` (one ``site=<key>`` Parquet file per site),
``failures.parquet`` (the sites it failed) and ``network.json``, the seal: the SHA-256 of
every network file and of the failures table, and the manifest seal of every site folder
the tables were read from. This module reads them back and refuses what does not match
the seal; it knows no Dask and no batch machinery, so ``verify`` and the readers need not
load them.
"""

from __future__ import annotations

import json
import warnings
from pathlib import Path

import pandas as pd
import pyarrow as pa

from .errors import ConfigError, FluxpartWarning, InputFileError
from .manifest import manifest_text, read_manifest, seal_intact
from .network_layout import NETWORK_DATASETS, NETWORK_SEAL
from .store import (
    arrow_table,
    damaged_table,
    file_sha256,
    read_table,
    reader_attrs,
    shortage,
    unreadable,
)

__all__ = ["FAILURES_FILE", "RERUN_REMEDY", "SealMismatch", "failed_sites", "network_table", "read_network",
           "read_network_annual"]

#: Index column of each budget table, the network dataset's sort key after ``site``.
PERIOD_COLUMNS = {"annual": "year", "monthly": "month", "daily": "date"}
#: File of the failures table inside the batch output folder.
FAILURES_FILE = "failures.parquet"
#: The network datasets' partition column (``site=<key>`` folders).
NETWORK_SITE_DESCRIPTION = ("site key (the result folder's name); the partition key of the "
                            "dataset, from its site=<key> folder, not a column of the files")


#: The remedy of a batch output folder whose network files do not match their seal.
RERUN_REMEDY = ("run the batch again, which skips the sites up to date and rewrites the network "
         "tables whole")


class SealMismatch(InputFileError):
    """Network files, ``failures.parquet`` or a site's manifest not as ``network.json``
    seals them (or the seal damaged or incomplete): the problem and its remedy apart.

    The message is ``"<problem>; <remedy>"``, as before. ``verify`` of a batch output
    folder reports the problem alone (the remedy, a new batch, would overwrite what an
    auditor must see); it cut the message at the remedy's words, which a rewording of
    either would have broken without a sign (round leftovers58).

    Attributes
    ----------
    problem : str
        What does not match the seal, naming the file or folder.
    remedy : str
        What to do (:data:`RERUN_REMEDY`).
    """

    def __init__(self, problem: str, remedy: str):
        super().__init__(f"{problem}; {remedy}")
        self.problem = problem
        self.remedy = remedy

    def __reduce__(self):
        # pickled whole (a Dask worker's error travels to the batch process)
        return type(self), (self.problem, self.remedy)


def _check_network_seal(out: Path, folder: str, files: list[Path]) -> None:
    """Refuse network files that do not match :data:`NETWORK_SEAL` or their site folders.

    The seal names each site's folder relative to `out` (``out/<key>`` in a batch).

    Output folders of batches before the seal existed have none and are read as they are.
    """
    path = out / NETWORK_SEAL
    if not path.exists():
        return
    try:
        # a byte-order mark or UTF-16 of an editor's save is no content, as for a
        # manifest (manifest_text); it was called damaged, "cut short or edited"
        seal = json.loads(manifest_text(path.read_bytes()))
    except OSError as error:
        raise unreadable(path, error) from None
    except (ValueError, RecursionError):     # cut short, edited, nested too deep
        seal = None
    if not isinstance(seal, dict):
        # it said "network.json says so: a batch was stopped", of a file cut short or edited
        raise SealMismatch(f"{str(path)!r} is damaged (not the JSON object a batch writes: "
                           f"cut short or edited), so the network tables in {str(out)!r} "
                           "cannot be checked", RERUN_REMEDY)
    if seal.get("complete") is not True:
        raise SealMismatch(f"the network tables in {str(out)!r} are incomplete ({NETWORK_SEAL} "
                           "says so: a batch was stopped while writing them)", RERUN_REMEDY)
    _check_failures_seal(out, seal)
    recorded = (seal.get("files") or {}).get(folder) or {}
    found = {f.parent.name.removeprefix("site="): f for f in files}
    for key in sorted(set(found) | set(recorded)):
        if key not in found or key not in recorded \
                or file_sha256(found[key]) != recorded[key]:
            raise SealMismatch(f"{folder}/site={key} in {str(out)!r} is not the file the "
                               f"batch recorded in {NETWORK_SEAL} (a batch stopped while "
                               "rewriting the network tables, or an edit)", RERUN_REMEDY)
    for key, site in sorted((seal.get("sites") or {}).items()):
        site_folder = out / str(site.get("folder", key) if isinstance(site, dict) else key)
        edited, unread = False, None
        try:
            manifest = read_manifest(site_folder)
            # the seal recomputed, not only the recorded one: an edited manifest keeps its
            # old "seal" entry, and passed (review round thirteen)
            edited = not seal_intact(manifest)
            now = None if edited else manifest.get("seal")
        except InputFileError as error:
            now, unread = None, str(error)
        if not isinstance(site, dict) or now != site.get("seal"):
            # a manifest whose own seal fails was edited, one that cannot be read was
            # deleted or damaged: no batch leaves either, so the stopped batch the message
            # offered misled an auditor (auditor53; a deleted one, review71)
            why = (f"its manifest.json cannot be read: {unread}" if unread else
                   "its manifest.json was edited after it was written (its own seal does "
                   "not hold)" if edited else "a batch stopped after writing some sites, or "
                   "a run into that folder")
            raise SealMismatch(f"the result folder {str(site_folder)!r} changed after the "
                               f"network tables were written ({why})", RERUN_REMEDY)


def _check_failures_seal(out: Path, seal: dict) -> None:
    """Refuse a ``failures.parquet`` that is not the one `seal` records.

    The failures table says which sites the batch did not compute; an edited one (a row
    added, removed or reworded) relabelled sites without a word, as the seal recorded its
    SHA-256 but nothing compared it (round faults45). A seal written before the entry
    existed (no ``"failures"`` key) is not checked for it.
    """
    if "failures" not in seal:
        return
    path = out / FAILURES_FILE
    try:
        now = file_sha256(path) if path.is_file() else None
    except OSError as error:
        raise unreadable(path, error) from None
    if now != seal["failures"]:
        # a file deleted was said to be "missing in network.json", as if the seal lacked it
        # (review69)
        state = (f"is missing from {str(out)!r}, while {NETWORK_SEAL} records it (deleted "
                 "or moved)" if now is None else
                 f"in {str(out)!r} is not the file the batch recorded in {NETWORK_SEAL} (an "
                 "edit, or a copy from another batch)")
        raise SealMismatch(f"{FAILURES_FILE} {state}, so which sites the batch failed "
                           "cannot be told", RERUN_REMEDY)


def read_network_annual(out) -> pd.DataFrame:
    """Read a batch's annual network dataset back as one DataFrame.

    Parameters
    ----------
    out : str or path-like
        The batch output folder (the one holding ``network_annual/``).

    Returns
    -------
    pandas.DataFrame
        One row per site and year: ``site`` (the site key, from the partition
        folder), ``year``, ``site_name``, ``latitude``, ``longitude``,
        ``utc_offset`` and the annual budget columns [g C m-2 per year], sorted by
        site and year; ``attrs["failed_sites"]`` and the warning as
        :func:`read_network`'s.
    """
    frame = network_table(out, "annual")
    _warn_failed(out, frame)
    return frame


def read_network(out, table: str = "annual") -> pd.DataFrame:
    """Read one of a batch's network datasets back as one DataFrame.

    Parameters
    ----------
    out : str or path-like
        The batch output folder.
    table : {"annual", "monthly", "daily"}
        Which budget table; the dataset lives in ``out/network_<table>/``.

    Returns
    -------
    pandas.DataFrame
        One row per site and period: ``site`` (the site key, from the partition
        folder), the period (``year``, ``month`` or ``date``), the site columns
        and the budget columns [g C m-2 per period], sorted by site and period;
        ``attrs`` holds ``units`` (UDUNITS-2) and ``descriptions`` of every column
        and the time convention, as :func:`fluxpart.load` gives a site's tables;
        ``attrs["failed_sites"]`` the sites left out because they failed
        (:func:`failed_sites`).

    Warns
    -----
    FluxpartWarning
        Where the batch that wrote the tables failed any site: names each one.

    Raises
    ------
    ConfigError
        If `table` is not one of the three budget tables.
    InputFileError
        If `out` holds no such dataset, or its files do not match the seal the
        batch wrote last (``network.json``: a batch stopped while writing them, or
        after rewriting some site folders); the message says to run the batch
        again. Folders of batches before the seal existed are read unchecked.
    """
    frame = network_table(out, table)
    _warn_failed(out, frame)
    return frame


def network_table(out, table: str) -> pd.DataFrame:
    """One network dataset of a batch output folder, checked against its seal, without a warning.

    :func:`read_network` without its warning of failed sites: the read-back of the batch
    that wrote the tables (which reports its failures itself) and of ``verify`` (which
    lists them as not computed).

    Parameters
    ----------
    out, table
        As :func:`read_network`'s: the batch output folder and ``"annual"``,
        ``"monthly"`` or ``"daily"``.

    Returns
    -------
    pandas.DataFrame
        As :func:`read_network`'s, ``attrs["failed_sites"]`` included.

    Raises
    ------
    ConfigError
        If `table` is not one of the three budget tables.
    InputFileError
        As :func:`read_network`: no such dataset, or its files, a site folder's manifest
        or ``failures.parquet`` not as sealed in ``network.json``.

    References
    ----------
    Common practice of tamper-evident records: each file's SHA-256 (FIPS 180-4) recorded
    when written and compared when read.
    """
    if table not in NETWORK_DATASETS:
        raise ConfigError(f"network table {table!r}: expected one of "
                          f"{', '.join(map(repr, NETWORK_DATASETS))}")
    path = Path(out) / NETWORK_DATASETS[table]
    if not path.is_dir():
        raise InputFileError(f"{str(path)!r} does not exist: {str(out)!r} is not a batch "
                             "output folder")
    files = sorted(path.glob("site=*/*.parquet"))
    _check_network_seal(Path(out), NETWORK_DATASETS[table], files)
    failed = failed_sites(Path(out))
    if not files:
        frame = pd.DataFrame({"site": pd.Series([], dtype="str")})
    else:
        frame = _network_frame(files)
        ordered = ["site", *[c for c in frame.columns if c != "site"]]
        frame = frame[ordered].sort_values(["site", PERIOD_COLUMNS[table]],
                                           kind="stable").reset_index(drop=True)
        frame.attrs = _network_attrs(files[0])
    frame.attrs["failed_sites"] = failed
    return frame


def _warn_failed(out, frame: pd.DataFrame) -> None:
    """Warn, for the caller of a public reader, of the sites `frame` leaves out."""
    failed = frame.attrs.get("failed_sites") or {}
    if failed:
        named = ", ".join(f"{key!r} ({text.split(':', 1)[0]})" for key, text in failed.items())
        warnings.warn(FluxpartWarning(
            f"the network tables of {str(out)!r} leave out {len(failed)} site(s) that "
            f"failed in the batch that wrote them ({frame['site'].nunique()} site(s) "
            f"read): {named}; their errors in {FAILURES_FILE} and attrs['failed_sites']"),
            stacklevel=3)


def failed_sites(out: Path) -> dict:
    """The sites a batch's network tables leave out because they failed, as recorded.

    Parameters
    ----------
    out : pathlib.Path
        The batch output folder.

    Returns
    -------
    dict
        Site key -> ``"<error class>: <message>"`` (the message's first 200 characters),
        in the order of ``failures.parquet``; empty where it is absent or holds no row.

    Notes
    -----
    A reader of the network tables alone saw only the sites written, with no word of
    those missing (all sites failed gave an empty table without a note; round faults44).
    """
    path = out / FAILURES_FILE
    if not path.is_file():
        return {}
    failures = read_table(path).reset_index()
    return {str(row.site): f"{row.error}: {str(row.message)[:200]}"
            for row in failures.itertuples(index=False)}


def _network_frame(files: list[Path]) -> pd.DataFrame:
    """The site files of one network table as one frame, read on the calling thread.

    The same frame as ``pyarrow.dataset.dataset(files, partitioning=hive).to_table()``
    gave (the first file's columns, a column another file lacks as nulls, the partition
    key ``site`` last), without the dataset scanner: it starts pyarrow's I/O pool (7
    threads here, also with ``use_threads=False``), and under a memory limit a thread the
    system refuses hung the read for good (``ulimit -v`` 325-475 MB: `batch`'s client
    never ended) or ended the process before Python could say why (glibc's "cannot
    allocate memory for thread-local data: ABORT", exit 127, up to 700 MB). Each file is
    read by :func:`fluxpart.store.arrow_table`, as :func:`fluxpart.store.read_table` reads
    a site's tables.

    Parameters
    ----------
    files : list of pathlib.Path
        ``<dataset>/site=<key>/*.parquet``, in the order the rows are wanted.

    Returns
    -------
    pandas.DataFrame
        The files' rows in order, with ``site`` (the key of each file's folder) last.

    Raises
    ------
    ResourceShortage
        Where the system refused memory or a thread while reading a file.
    InputFileError
        Where a file cannot be read or decoded.

    References
    ----------
    Apache Arrow documentation, ``pyarrow.parquet.ParquetFile.read`` and
    ``pyarrow.Table.to_pandas``: ``use_threads=False`` decodes on the calling thread (m).
    """
    schema, parts = None, []
    for file in files:
        part = arrow_table(file)
        schema = schema or part.schema
        arrays = [part[f.name].cast(f.type) if f.name in part.column_names
                  else pa.nulls(len(part), f.type) for f in schema]
        key = file.parent.name.removeprefix("site=")
        parts.append(pa.Table.from_arrays([*arrays, pa.array([key] * len(part), pa.string())],
                                          names=[*schema.names, "site"]))
    try:
        return pa.concat_tables(parts).to_pandas(use_threads=False)
    except (pa.ArrowException, MemoryError) as error:
        raise shortage(files[0], error) or damaged_table(files[0], error) from None


def _network_attrs(path: Path) -> dict:
    """The ``attrs`` of a network table read back: the units, descriptions, time
    convention and table name of one of its files (:func:`fluxpart.store.reader_attrs`;
    every site's file has the same, :func:`fluxpart.batch._unify`), and the ``site`` partition key.
    A file without fluxpart's metadata gives none."""
    import pyarrow.parquet as pq

    from .store import parquet_source

    try:
        with parquet_source(path) as source:
            info = json.loads((pq.read_schema(source).metadata or {}).get(b"fluxpart", b"{}"))
    except (OSError, ValueError, pa.ArrowException):
        info = {}
    if not isinstance(info, dict) or not isinstance(info.get("columns"), dict):
        return {}
    attrs = reader_attrs(info)
    attrs["units"] = {"site": "", **attrs["units"]}
    attrs["descriptions"] = {"site": NETWORK_SITE_DESCRIPTION, **attrs["descriptions"]}
    return attrs
