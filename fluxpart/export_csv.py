"""Plain CSV export of a result with its units: ``fluxpart export DIR --csv FOLDER``.

``pandas.read_parquet``, R's ``read.csv`` and a spreadsheet read a table but not the
units fluxpart stores in the Parquet metadata. :func:`write_csv` writes every table of a
result (``timeseries``, ``daily``, ``monthly``, ``annual``, ``ustar``, ``audit``,
``screening`` and the ``parameters_*`` tables) as ``<table>.csv`` in one folder, with one
``csv-metadata.json`` describing them all in the W3C "CSV on the Web" (CSVW) metadata
vocabulary: a table group whose ``tables`` list gives, for every column, its ``name``,
``datatype``, UDUNITS-2 unit and description.

The CSV files (RFC 4180 shape):

- UTF-8 (no byte-order mark), comma separated, ``.`` as decimal mark, one header row of
  the column names, lines ended by ``\\n``, a field quoted with ``"`` only where it holds
  a comma, a quote or a line break;
- the index of a table (``time``, ``date``, ``month``, ``year``, ...) is its first column,
  as in the Parquet file;
- numbers as the shortest text that reads back to the same double (Python ``repr``:
  ``0.1``, ``1e-05``), so a reader gets the Parquet value bit for bit; ``INF`` / ``-INF``
  (XML Schema) for infinities; booleans ``true`` / ``false``;
- a missing value (NaN, NaT, no label) is an empty field;
- time stamps as ISO 8601 with the UTC offset of the site's local standard time stated,
  ``2021-01-01T00:30:00+01:00``: the start of the interval in local standard time (no
  daylight saving), as in every table of fluxpart (:func:`fluxpart.schema.time_convention`).

``csv-metadata.json`` (JSON-LD context ``http://www.w3.org/ns/csvw``; the file name is the
one the CSVW standard's site-wide discovery looks for beside the CSV files):

- per column: ``name`` and ``titles`` (the header), ``datatype`` (``double``,
  ``integer``, ``boolean``, ``string``, ``{"base": "datetime", "format":
  "yyyy-MM-ddTHH:mm:ssxxx"}``, or for a labelled column ``{"base": "string", "format":
  "^(?:measured|A|...)$"}``, the pattern of its labels: :func:`_labels_datatype`),
  ``schema:unitText`` (the unit, a UDUNITS-2 string, the same as the Parquet field's;
  left out where a column has none: names, labels, times) and ``dc:description`` (the
  Parquet field's description; for the tonnes, ``net_uptake_t_co2_per_ha``, followed by
  :data:`fluxpart.manifest.TONNES_CAUTION`, since leftovers57). ``schema:unitText`` is
  the schema.org property for "a unit of measurement given as text"; the substance
  (carbon, CO2) is named in the description, as in the Parquet metadata (UDUNITS-2 reads
  ``g C m-2`` as gram-coulomb);
- per table: ``url`` (the CSV file), ``dc:title``, ``tableSchema`` (``columns`` and the
  ``primaryKey`` where the table has an index);
- for the group: ``dc:title``, ``dc:source`` (the release that computed the result),
  ``dc:description`` (the time convention), ``rdfs:comment`` (the caution) and
  ``schema:additionalProperty``: the site facts and time convention as
  ``schema:PropertyValue`` items (``schema:name``, ``schema:value``, ``schema:unitText``):
  ``site_name``, ``site_latitude`` [degrees_north], ``site_longitude`` [degrees_east],
  ``site_utc_offset`` [h], ``utc_offset_iso8601`` (``+01:00``), ``interval_minutes``
  [min], ``time_convention``, ``time_stamp`` (``start of interval``),
  ``time_zone`` (``local standard time, no daylight saving``), ``sign_convention``, and
  the respiration choices the partitioned series rest on
  (:func:`fluxpart.respiration_facts.respiration_facts`: ``respiration_temperature``,
  ``respiration_temperature_delay_hours`` [h], ``respiration_temperature_basis``,
  ``respiration_form_share_constant_q10`` [1]; since round modeller25).

The folder is written under a temporary name beside the target and renamed into place:
it is complete or absent. Same result, same bytes (no time of writing is recorded).

References
----------
Tennison, J., Kellogg, G. and Herman, I. (eds.) (2015). Model for Tabular Data and Metadata
on the Web; Metadata Vocabulary for Tabular Data. W3C Recommendations, 17 December 2015
(sections on table groups, columns, datatypes with date/time format patterns, common
properties, and locating metadata: ``csv-metadata.json``).
Shafranovich, Y. (2005). RFC 4180: Common Format and MIME Type for Comma-Separated Values.
ISO 8601-1:2019, date and time representations (UTC offset ``±hh:mm``).
Unidata (2024). UDUNITS-2 units database and grammar.
"""

from __future__ import annotations

import csv
import errno
import io
import json
import math
import os
import re
import tempfile
from contextlib import ExitStack
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import OutputError
from .manifest import TONNES_CAUTION, shown_path
from .respiration_facts import FACT_UNITS, respiration_facts
from .schema import time_convention, units_for_table
from .store import (
    _stored_index,
    file_mode,
    folder_mode,
    full_disk_remedy,
    made_folder,
    remove_folder,
    remove_stale,
    require_owner_access,
    set_mode,
)

__all__ = ["DESCRIPTION_PROPERTY", "METADATA_NAME", "UNIT_PROPERTY", "check_name", "check_target",
           "command_csv", "csv_tables", "offset_text", "write_csv"]

#: Name of the CSVW metadata file (the standard's default for a folder of CSV files).
METADATA_NAME = "csv-metadata.json"
#: CSVW common property carrying a column's UDUNITS-2 unit (schema.org ``unitText``).
UNIT_PROPERTY = "schema:unitText"
#: Columns whose description in ``csv-metadata.json`` adds :data:`.manifest.TONNES_CAUTION`
#: (what NEE leaves out, and that the tonnes are no credited removal): the tonnes a
#: carbon-credit reader quotes. The Parquet field's description is left as it is (the
#: table's bytes); the report and the command line say the same beside the tonnes.
CAUTIONED_COLUMNS = ("net_uptake_t_co2_per_ha",)
#: CSVW common property carrying a column's description (Dublin Core ``description``).
DESCRIPTION_PROPERTY = "dc:description"
#: The date-time pattern of every time stamp (CSVW/Unicode LDML syntax; ``xxx`` = ``+hh:mm``).
DATETIME_FORMAT = "yyyy-MM-ddTHH:mm:ssxxx"
_DIALECT = {"encoding": "utf-8", "delimiter": ",", "quoteChar": "\"", "doubleQuote": True,
            "header": True, "headerRowCount": 1, "lineTerminators": ["\n"],
            "skipInitialSpace": False, "trim": False}
_CAUTION = ("A tower budget is one line of evidence for carbon-credit quantification, not a "
            "certified credit; the applicable crediting methodology and accredited verification "
            "decide how it may be used.")
_SIGNS = ("nee (every table): positive = release to the atmosphere, negative = net uptake; "
          "reco: positive = release; gpp: positive = uptake; net_uptake_t_co2_per_ha: "
          "positive = uptake")
#: Tables first in the metadata file, in this order; the others follow by name.
_FIRST = ("timeseries", "daily", "monthly", "annual", "ustar", "audit", "screening")


def offset_text(hours: float) -> str:
    """ISO 8601 UTC offset ``±hh:mm`` of `hours` (rounded to the minute).

    Parameters
    ----------
    hours : float
        Offset of the local standard time from UTC [h], e.g. 1.0, -5.0, 5.75.

    Returns
    -------
    str
        ``"+01:00"``, ``"-05:00"``, ``"+05:45"``; ``"+00:00"`` for UTC.

    References
    ----------
    ISO 8601-1:2019, section 4.3.13 (m): time shift from UTC as ``±hh:mm``.
    """
    minutes = int(round(float(hours) * 60.0))
    sign = "-" if minutes < 0 else "+"
    return f"{sign}{abs(minutes) // 60:02d}:{abs(minutes) % 60:02d}"


def _float_text(values: np.ndarray) -> list[str]:
    out = []
    for value in values.tolist():
        if value != value:                      # NaN
            out.append("")
        elif math.isinf(value):
            out.append("INF" if value > 0 else "-INF")
        else:
            out.append(repr(value))
    return out


def _labels_datatype(categories) -> dict:
    """The CSVW datatype of a labelled column: a string that is one of `categories`.

    CSVW's ``format`` of a string datatype is a regular expression (ECMAScript syntax)
    its values must match; anchored, it admits the labels and nothing else, as a NetCDF
    flag's ``flag_meanings`` does (round modeller26). An empty field is a missing value
    (the default ``null``) and is not matched.

    References
    ----------
    W3C (2015). Metadata Vocabulary for Tabular Data, section 5.11.2 (formats for other
    types: a regular expression) (m).
    """
    escaped = [re.sub(r"([\\^$.|?*+()\[\]{}/])", r"\\\1", str(label)) for label in categories]
    return {"base": "string", "format": f"^(?:{'|'.join(escaped)})$"}


def _column(values: pd.Series, offset: str) -> tuple[list[str], object]:
    """Text of every value of one column and its CSVW datatype."""
    dtype = values.dtype
    if isinstance(dtype, pd.CategoricalDtype) or pd.api.types.is_string_dtype(dtype) \
            or pd.api.types.is_object_dtype(dtype):
        datatype = (_labels_datatype(dtype.categories)
                    if isinstance(dtype, pd.CategoricalDtype) else "string")
        return [("" if v is None or (isinstance(v, float) and v != v) or v is pd.NA
                 else str(v)) for v in values.astype(object).tolist()], datatype
    if pd.api.types.is_bool_dtype(dtype):
        mask = values.isna().to_numpy()
        return ["" if missing else ("true" if value else "false")
                for value, missing in zip(values.tolist(), mask, strict=True)], "boolean"
    if pd.api.types.is_datetime64_any_dtype(dtype):
        stamps = pd.DatetimeIndex(values)
        if stamps.tz is not None:               # never written by fluxpart; kept as given
            text = [("" if s is pd.NaT else s.isoformat()) for s in stamps]
        else:
            text = [("" if s != s else f"{s}{offset}")
                    for s in stamps.strftime("%Y-%m-%dT%H:%M:%S").tolist()]
        return text, {"base": "datetime", "format": DATETIME_FORMAT}
    if pd.api.types.is_integer_dtype(dtype):
        mask = values.isna().to_numpy()
        return ["" if missing else str(int(value))
                for value, missing in zip(values.tolist(), mask, strict=True)], "integer"
    if pd.api.types.is_float_dtype(dtype):
        return _float_text(values.to_numpy(dtype=float, na_value=np.nan)), "double"
    return [("" if v is None else str(v)) for v in values.astype(object).tolist()], "string"


def _as_columns(frame: pd.DataFrame) -> tuple[list[str], list[pd.Series]]:
    """Column names and values as the Parquet file stores them: the index first."""
    names = [str(c) for c in frame.columns]
    series = [frame[c] for c in frame.columns]
    index_name = _stored_index(frame)
    if index_name is not None and index_name not in names:
        names.insert(0, index_name)
        series.insert(0, frame.index.to_series(index=pd.RangeIndex(len(frame))))
    return names, series


def _table_csv(frame: pd.DataFrame, offset: str) -> tuple[bytes, list[str], list]:
    names, series = _as_columns(frame)
    texts, types = [], []
    for values in series:
        text, datatype = _column(values.reset_index(drop=True), offset)
        texts.append(text)
        types.append(datatype)
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, delimiter=",", quotechar="\"", doublequote=True,
                        quoting=csv.QUOTE_MINIMAL, lineterminator="\n")
    writer.writerow(names)
    writer.writerows(zip(*texts, strict=True))
    return buffer.getvalue().encode("utf-8"), names, types


def _as_stored(name: str, frame: pd.DataFrame, stored: bool,
               year_start: str) -> tuple[pd.DataFrame, dict]:
    """`frame` as a result folder stores it, and column -> (unit, description).

    `stored`: the table was read from a result folder (:func:`fluxpart.store.read_table`),
    whose ``attrs`` hold the unit and description of every stored column as the file
    has them: those are used, so an older result keeps its own. Otherwise (a result in
    memory) the table gets the index name and the units a result folder would store
    (:func:`fluxpart.resultdir._write_tables`), so both routes give the same bytes;
    `year_start` ("MM-DD") words the budget year's label as the folder's writer does.
    """
    if stored:
        units = frame.attrs.get("units") or {}
        texts = frame.attrs.get("descriptions") or {}
        return frame, {column: (unit, texts.get(column, "")) for column, unit in units.items()}
    from .resultdir import _unit_table

    frame = frame if frame.index.name is not None else frame.rename_axis("row")
    columns = [frame.index.name, *map(str, frame.columns)]
    return frame, units_for_table(_unit_table(name), columns, year_start)


def _table_metadata(name: str, frame: pd.DataFrame, names: list[str], types: list,
                    described: dict) -> dict:
    columns = []
    for column, datatype in zip(names, types, strict=True):
        unit, description = described.get(column, ("", ""))
        entry = {"name": column, "titles": column, "datatype": datatype}
        if unit:
            entry[UNIT_PROPERTY] = unit
        if column in CAUTIONED_COLUMNS:      # the tonnes' caution (leftovers57)
            description = f"{description}. {TONNES_CAUTION}." if description else \
                f"{TONNES_CAUTION}."
        if description:
            entry[DESCRIPTION_PROPERTY] = description
        columns.append(entry)
    schema = {"columns": columns}
    index_name = _stored_index(frame)
    if index_name is not None and frame.index.is_unique:
        schema["primaryKey"] = index_name
    return {"url": f"{name}.csv", "dc:title": name, "tableSchema": schema}


def _ordered(tables: dict) -> list[str]:
    return [n for n in _FIRST if n in tables] + sorted(n for n in tables if n not in _FIRST)


def csv_tables(result, source: str | None = None, *, stored: bool = False,
               links: dict | None = None) -> dict[str, bytes]:
    """The files of the CSV export of `result`: file name -> bytes.

    Parameters
    ----------
    result : fluxpart.result.Result
        A result from :func:`fluxpart.process` or :func:`fluxpart.load`.
    source : str, optional
        The fluxpart release that computed the result (default: this one).
    stored : bool, default False
        True: `result` was loaded from a result folder and each column's unit and
        description are taken from its tables' ``attrs`` (the Parquet metadata, as an
        older release wrote it). False: they are those a result folder of this release
        stores (:func:`fluxpart.schema.units_for_table`), the index named as it does;
        for a result of this release both give the same bytes.
    links : dict, optional
        :func:`fluxpart.manifest.result_links` of the result folder `result` was loaded
        from: each written as the property ``result_<name>`` (the manifest's seal, the
        seed, the input's and site config's SHA-256, the code fingerprint).

    Returns
    -------
    dict of str to bytes
        ``<table>.csv`` for every table of :meth:`~fluxpart.result.Result.tables` and
        ``csv-metadata.json`` (CSVW) describing them.

    References
    ----------
    W3C (2015). Metadata Vocabulary for Tabular Data (CSVW); RFC 4180; ISO 8601.
    """
    from . import __version__

    site = result.site
    offset = offset_text(site.utc_offset)
    tables = result.tables()
    files, described = {}, []
    interval = None
    for name in _ordered(tables):
        frame, units = _as_stored(name, tables[name], stored, result.config.year_start)
        data, names, types = _table_csv(frame, offset)
        files[f"{name}.csv"] = data
        described.append(_table_metadata(name, frame, names, types, units))
        interval = interval if interval is not None else frame.attrs.get("interval_minutes")
    if interval is None and len(result.timeseries.index) > 1:
        steps = np.diff(result.timeseries.index.to_numpy().astype("datetime64[s]")
                        .astype(np.int64))
        interval = int(np.median(steps) // 60)
    convention = (result.timeseries.attrs.get("time_convention")
                  or time_convention(result.config.year_start))

    def fact(name, value, unit=None):
        item = {"@type": "schema:PropertyValue", "schema:name": name, "schema:value": value}
        if unit:
            item["schema:unitText"] = unit
        return item

    metadata = {
        "@context": ["http://www.w3.org/ns/csvw", {"@language": "en"}],
        "dc:title": f"Eddy-covariance carbon fluxes of {site.name}: gap-filled NEE, its "
                    "partitioning into GPP and Reco, and the budgets",
        "dc:source": f"fluxpart {source or __version__}",
        "dc:description": f"Time stamps: {convention}. Every time stamp is written with the "
                          f"UTC offset of the site's local standard time ({offset}).",
        "rdfs:comment": _CAUTION,
        "schema:additionalProperty": [
            fact("site_name", str(site.name)),
            fact("site_latitude", float(site.latitude), "degrees_north"),
            fact("site_longitude", float(site.longitude), "degrees_east"),
            fact("site_utc_offset", float(site.utc_offset), "h"),
            fact("utc_offset_iso8601", offset),
            fact("interval_minutes", None if interval is None else int(interval), "min"),
            fact("time_stamp", "start of interval"),
            fact("time_zone", "local standard time, no daylight saving"),
            fact("time_convention", convention),
            fact("sign_convention", _SIGNS),
            # the respiration choices both partitionings rest on (round modeller25)
            *(fact(name, value, FACT_UNITS.get(name))
              for name, value in respiration_facts(result.provenance).items()),
            # which result, input bytes and seed (auditor53): as the NetCDF export names them
            *(fact(f"result_{name}", value) for name, value in (links or {}).items()),
        ],
        "dialect": _DIALECT,
        "tables": described,
    }
    text = json.dumps(metadata, indent=1, ensure_ascii=False, allow_nan=False)
    files[METADATA_NAME] = (text + "\n").encode("utf-8")
    return files


def check_target(target: Path) -> None:
    """Refuse a `target` for the CSV folder that is a file or a folder that is not empty.

    Raises
    ------
    OutputError
        Naming the option and the path.
    """
    check_name(target)
    if target.is_symlink():
        # the folder is renamed into place: that would replace the link, not fill its folder
        raise OutputError(f"--csv {str(target)!r} is a symbolic link; the CSV folder is "
                          "written as a new folder in its place: give the folder the link "
                          "points to, or a new folder")
    if target.exists() and not target.is_dir():
        raise OutputError(f"--csv {str(target)!r} exists and is not a folder: give a new "
                          "folder for the CSV files")
    if target.is_dir() and os.path.ismount(target):
        # a mounted drive's top folder cannot be removed or renamed onto (EBUSY): the
        # folder written beside it could never take its place
        raise OutputError(f"--csv {str(target)!r} is the top folder of a mounted drive; "
                          "the CSV folder is written beside its target and renamed into "
                          "place, which a mount point cannot take: give a new folder inside "
                          f"it, e.g. {str(target / 'fluxpart-csv')!r}")
    if target.is_dir():
        try:
            empty = not any(target.iterdir())
        except OSError as error:
            raise OutputError(f"--csv {str(target)!r} cannot be read ({error.strerror or error})"
                              "; choose another folder") from None
        if not empty and (target / METADATA_NAME).is_file():
            # its own earlier export was refused as any folder (faults43): say what it
            # holds; an export never replaces a folder, as it cannot tell whose files are
            raise OutputError(f"--csv {str(target)!r} holds an earlier CSV export (its "
                              f"{METADATA_NAME}); an export does not replace a folder: "
                              "delete that folder to export there again, or give a new one")
        if not empty:
            raise OutputError(f"--csv {str(target)!r} is a folder that is not empty; it is "
                              "not replaced: give a new or empty folder, or delete it first")


def write_csv(result, folder) -> Path:
    """Write the CSV export of `result` (:func:`csv_tables`) to the new folder `folder`.

    Parameters
    ----------
    result : fluxpart.result.Result or path-like
        A result, or a result folder (loaded and checked against its manifest first).
    folder : path-like
        The folder to create; it must not exist, or be empty.

    Returns
    -------
    pathlib.Path
        The folder written.

    Raises
    ------
    OutputError
        If `folder` is a file, a non-empty folder, or cannot be written (no permission,
        a full disk). The folder is written under a temporary name beside it and renamed
        into place: nothing is left half-written, and a failure leaves no folder.
    """
    target = Path(folder)
    check_target(target)
    require_owner_access()
    source, stored, links = None, False, {}
    if isinstance(result, (str, os.PathLike)):
        from .export import _computed_by
        from .manifest import read_manifest, result_links
        from .result import load

        directory = result
        result = load(directory)
        source, stored = _computed_by(directory), True
        links = result_links(read_manifest(directory))
    files = csv_tables(result, source, stored=stored, links=links)
    parent = target.absolute().parent
    from .resultdir import dangling_link_above

    dangling = dangling_link_above(target)
    if dangling:
        raise OutputError(f"--csv {str(target)!r} {dangling}; choose another place")
    for ancestor in (parent, *parent.parents):
        if ancestor.exists() or ancestor.is_symlink():
            if not ancestor.is_dir():
                raise OutputError(f"--csv {str(target)!r}: {str(ancestor)!r} is a file, not a "
                                  "folder; choose a place in a folder")
            break
    try:
        parent.mkdir(parents=True, exist_ok=True)
        stem = _staging_stem(target.name, parent)
        # a probe, removed at once: a folder that cannot be written is named before the
        # lock is taken; the staging folder is made under the lock (_write_locked)
        Path(tempfile.mkdtemp(prefix=f".{stem}.", suffix=".tmp", dir=parent)).rmdir()
    except OSError as error:
        remedy = (full_disk_remedy(parent) if error.errno == errno.ENOSPC
                  else "choose a writable place")
        raise OutputError(f"--csv {str(target)!r}: cannot write in {str(parent)!r} "
                          f"({error.strerror or error}); {remedy}") from None
    with ExitStack() as held:
        _write_locked(files, target, parent, stem, held)
    return target


def _write_locked(files: dict, target: Path, parent: Path, stem: str,
                  held: ExitStack) -> None:
    """Write `files` into a staging folder ``.STEM.xxxxxxxx.tmp`` in `parent` and rename
    it to `target`, holding the lock of `target` (:func:`fluxpart.resultdir.folder_lock`,
    entered on `held`) from before the staging folder is made and those of killed exports
    are swept until the rename.

    Every other staging folder of `target` is then a leftover, whatever its modification
    time: judged by it, a file system whose clock runs behind (a network file server's)
    let a second export sweep the staging folder of one running now, and one whose clock
    runs ahead kept leftovers for good (round faults27).
    """
    from .resultdir import DEFAULT_LOCK_TIMEOUT, folder_lock

    staging, made = None, []
    try:
        # the staging stem: the target's name, or its hash where a name near the limit
        # leaves no room for '.NAME.lock'
        held.enter_context(folder_lock(parent / stem, DEFAULT_LOCK_TIMEOUT, remove=True))
        # named in `made` before it exists: a stop the moment it was made is removed below
        # (inside mkdtemp it was left until the next export, round faults49)
        staging = made_folder(parent, f".{stem}.", ".tmp", made)
        remove_stale(parent, re.compile(rf"^\.{re.escape(stem)}\.[a-z0-9_]{{8}}\.tmp$"),
                     keep=staging)
        for name, data in files.items():
            path = staging / name
            with open(path, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
            set_mode(path, file_mode())
        set_mode(staging, folder_mode())
        check_target(target)                    # made meanwhile by another writer
        if target.is_dir():
            target.rmdir()                       # empty: replaced by the rename
        os.rename(staging, target)
    except OSError as error:
        for path in made:
            _remove(path)
        reason = os.strerror(error.errno) if error.errno else str(error)
        if error.errno in (errno.ENOTEMPTY, errno.EEXIST) and target.exists():
            # another export (or a user) filled the folder between the check and the rename
            raise OutputError(f"--csv {str(target)!r} was written by another process while "
                              "this export ran; it is left as that process wrote it and "
                              "nothing of this export was written: give a new folder") from None
        remedy = ("raise the file-size limit (`ulimit -f`), or choose another place"
                  if error.errno == errno.EFBIG else full_disk_remedy(target.parent)
                  if error.errno == errno.ENOSPC else "free space, or choose another place")
        raise OutputError(f"--csv {str(target)!r}: writing failed ({reason}); nothing was "
                          f"written: {remedy}") from None
    except BaseException:
        for path in made:
            _remove(path)
        raise


def check_name(target: Path) -> None:
    """Refuse a `target` folder name longer than its file system allows (``NAME_MAX``).

    Raises
    ------
    OutputError
        Naming the option, the name's length in bytes and the limit.
    """
    limit, size = _name_limit_of(target), len(os.fsencode(target.name))
    if size > limit:
        raise OutputError(f"--csv: the folder name {target.name[:40]!r}... is {size} bytes, "
                          f"longer than a name may be on this file system ({limit} bytes); "
                          "choose a shorter name")


def _name_limit_of(target: Path) -> int:
    """The longest name [bytes] in the nearest existing folder above `target`."""
    from .export import _name_limit

    for folder in target.absolute().parents:
        if folder.is_dir():
            return _name_limit(folder)
    return 255


def _staging_stem(name: str, parent: Path) -> str:
    """The name part of the staging folder ``.STEM.xxxxxxxx.tmp`` of the target `name`.

    `name` itself where the staging name (14 bytes longer) fits the file system's limit
    on a name (``pathconf`` ``PC_NAME_MAX``, else 255 bytes: common practice on ext4,
    XFS, APFS, NTFS); else the first 16 hexadecimal digits of its SHA-256, so a target
    name that is legal but near the limit can still be written.
    """
    import hashlib

    from .export import _name_limit

    encoded = os.fsencode(name)
    if len(encoded) + 14 <= _name_limit(parent):
        return name
    return "csv-" + hashlib.sha256(encoded).hexdigest()[:16]


def _remove(staging: Path) -> None:
    remove_folder(staging)      # also where a second Ctrl-C interrupts the removal


def command_csv(directory, folder) -> Path:
    """The CSV part of ``fluxpart export DIR --csv FOLDER``; prints what was written."""
    path = write_csv(directory, folder)
    print(f"wrote {shown_path(f'{path}/')} (CSV tables with {METADATA_NAME}: W3C CSVW, "
          "units as UDUNITS-2)")
    return path
