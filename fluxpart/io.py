"""Read and validate a site's input: the site TOML and its CSV of tower records.

The reader turns a delimited text file of half-hourly or hourly records into the
canonical frame of :mod:`fluxpart.variables`: canonical column names, canonical
units, float64 values with missing data as NaN, and a tz-naive
:class:`~pandas.DatetimeIndex` named ``"time"`` of interval *start* stamps with a
regular 30- or 60-minute frequency. Everything it finds out on the way (records
read, stamps inserted, shift applied, derived variables, out-of-range counts,
suspected unit mix-ups) goes into a :class:`ReadReport`.

Every problem with the config or the file raises a subclass of
:class:`~fluxpart.errors.FluxpartError` whose message names the setting, column
or row at fault and a fix. The input file is only read, never written.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ._validate import read_toml
from .config import suggest_key
from .errors import (
    ConfigError,
    DuplicateTimestampError,
    ImplausibleValueError,
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
)
from .site import Site
from .variables import (
    REQUIRED,
    VARIABLES,
    saturation_vapour_pressure,
    to_canonical,
    units_for,
    vpd_from_rh,
)

__all__ = [
    "IMPLAUSIBLE_SHARE",
    "INTERVALS_MINUTES",
    "TIME_MARKS",
    "ReadReport",
    "SiteConfig",
    "read_config",
    "read_input",
    "read_site_config",
    "read_table",
]

#: Record intervals fluxpart accepts [minutes].
INTERVALS_MINUTES = (30, 60)

#: Where a file's stamp sits in its averaging interval.
TIME_MARKS = ("start", "middle", "end")

#: A variable stops the reader when more than this share of its present values lies
#: outside the plausible range of :data:`fluxpart.variables.VARIABLES` (and at least
#: 5 values do), or when its median does. Our choice:
#: isolated outliers (spikes, a bad hour) stay far below 5 % and are left to
#: screening; a unit or mapping mistake affects most of the record.
IMPLAUSIBLE_SHARE = 0.05

_IMPLAUSIBLE_MIN_COUNT = 5
_DEFAULT_MISSING = (-9999,)
_TOP_LEVEL_KEYS = ("input", "processing", "site")
_SITE_KEYS = ("latitude", "longitude", "name", "utc_offset")
_SITE_REQUIRED = ("name", "latitude", "longitude", "utc_offset")
_INPUT_KEYS = ("columns", "delimiter", "interval_minutes", "missing", "path", "time_column",
               "time_format", "time_marks", "units")
_INPUT_REQUIRED = ("path", "time_column", "time_format", "time_marks", "columns")
_FLOAT_SPELLINGS_OF_NAN = ("nan", "+nan", "-nan")
_RANGES_SHOWN = 5
# Usual band of the 90th percentile of |value| over a record, in the canonical unit,
# used only to rank alternative units when several would make a column plausible
# (our choice, common practice).
_TYPICAL_P90 = {"nee": (1.0, 50.0), "rg": (100.0, 1200.0), "tair": (5.0, 45.0),
                "tsoil": (5.0, 45.0), "vpd": (2.0, 50.0), "ustar": (0.1, 2.0),
                "rh": (30.0, 100.0)}


@dataclass(frozen=True)
class ReadReport:
    """What the reader found and did; printed by ``fluxpart check``.

    Attributes
    ----------
    source : str
        Path of the file read.
    interval_minutes : int
        Record interval [minutes], 30 or 60.
    time_marks : str
        Where the file's stamps sit in their interval: ``"start"``, ``"middle"`` or ``"end"``.
    shift_minutes : float
        Shift subtracted from the file's stamps to get interval starts [minutes].
    records_read : int
        Data rows read from the file (blank lines not counted).
    records : int
        Rows of the canonical frame (records read plus stamps inserted).
    first_start, last_start : pandas.Timestamp or None
        First and last interval start of the frame.
    stamps_inserted : int
        Stamps missing from the file and inserted as all-NaN rows.
    inserted_ranges : tuple of (Timestamp, Timestamp, int)
        The first few runs of inserted stamps: first start, last start, count.
    inserted_runs : int
        Number of runs of inserted stamps.
    columns : dict
        Canonical name -> file column it was read from (derived variables say so).
    units : dict
        Canonical name -> unit declared for the file (only where not canonical).
    missing_codes : tuple
        Codes read as missing.
    derived : tuple of str
        Canonical variables computed rather than read (``vpd`` from ``rh`` and ``tair``).
    missing_cells : dict
        Canonical name -> cells that were empty or a missing code.
    outside_range : dict
        Canonical name -> present values outside the plausible range (left for screening).
    warnings : tuple of str
        Problems found that did not stop the reader.
    """

    source: str
    interval_minutes: int
    time_marks: str
    shift_minutes: float
    records_read: int
    records: int
    first_start: pd.Timestamp | None
    last_start: pd.Timestamp | None
    stamps_inserted: int
    inserted_ranges: tuple = ()
    inserted_runs: int = 0
    columns: dict = field(default_factory=dict)
    units: dict = field(default_factory=dict)
    missing_codes: tuple = ()
    derived: tuple = ()
    missing_cells: dict = field(default_factory=dict)
    outside_range: dict = field(default_factory=dict)
    warnings: tuple = ()

    def __str__(self) -> str:
        lines = [
            f"source            {self.source}",
            f"interval          {self.interval_minutes} min",
            f"time marks        {self.time_marks} (stamps shifted by -{self.shift_minutes:g} min "
            "to interval starts)",
            f"period            {_stamp(self.first_start)} .. {_stamp(self.last_start)} "
            "(interval starts)",
            f"records read      {self.records_read}",
            f"records           {self.records}",
            f"stamps inserted   {self.stamps_inserted}"
            + (f" in {self.inserted_runs} run(s)" if self.inserted_runs else ""),
        ]
        for first, last, count in self.inserted_ranges:
            lines.append(f"    {_stamp(first)} .. {_stamp(last)} ({count} records)")
        if self.inserted_runs > len(self.inserted_ranges):
            lines.append(f"    ... and {self.inserted_runs - len(self.inserted_ranges)} more run(s)")
        lines.append("columns           " + ", ".join(
            f"{name} <- {source}" + (f" [{self.units[name]}]" if name in self.units else "")
            for name, source in self.columns.items()))
        lines.append("missing codes     " + (", ".join(repr(c) for c in self.missing_codes)
                                             or "none"))
        lines.append("derived           " + (", ".join(self.derived) or "none"))
        outside = {k: v for k, v in self.outside_range.items() if v}
        lines.append("outside range     " + (", ".join(f"{k}: {v}" for k, v in outside.items())
                                             or "none"))
        return "\n".join(lines)


@dataclass(frozen=True)
class SiteConfig:
    """A parsed and validated site TOML (its ``[site]`` and ``[input]`` tables).

    Attributes
    ----------
    site : Site
        The measurement site.
    config_path : pathlib.Path
        The TOML file.
    input_path : pathlib.Path
        The record file, resolved relative to the TOML file.
    columns : dict
        Canonical name -> file column, as written in ``[input.columns]``.
    units : dict
        Canonical name -> file unit, as written in ``[input.units]``.
    time_column, time_format, time_marks : str
        Time settings of ``[input]``.
    missing : tuple
        Missing-value codes, numbers or strings.
    delimiter : str
        Field delimiter of the file.
    interval_minutes : int or None
        Record interval [minutes], or ``None`` to infer it.
    document : dict
        The whole TOML document as read (``[processing]`` is for
        :meth:`fluxpart.Config.from_toml`).
    """

    site: Site
    config_path: Path
    input_path: Path
    columns: dict
    units: dict
    time_column: str
    time_format: str
    time_marks: str
    missing: tuple
    delimiter: str
    interval_minutes: int | None
    document: dict

    def read(self) -> tuple[pd.DataFrame, ReadReport]:
        """Read the site's records: ``(frame, report)`` as from :func:`read_table`."""
        return read_table(self.input_path, **self.table_arguments())

    def table_arguments(self) -> dict:
        """Return the keyword arguments of :func:`read_table` for this site."""
        return {"columns": dict(self.columns), "units": dict(self.units),
                "time_column": self.time_column, "time_format": self.time_format,
                "time_marks": self.time_marks, "missing": self.missing,
                "delimiter": self.delimiter, "interval_minutes": self.interval_minutes}


def read_config(path) -> tuple[pd.DataFrame, Site]:
    """Read a site TOML and the records it points to.

    Parameters
    ----------
    path : str or path-like
        The site config (DESIGN.md §4); its ``[input] path`` is relative to it.

    Returns
    -------
    frame : pandas.DataFrame
        Canonical frame (see :func:`read_table`).
    site : Site
        The site of ``[site]``.

    Raises
    ------
    ConfigError, InputFileError, MissingColumnError, TimestampError,
    DuplicateTimestampError, NonMonotonicTimestampError, SpacingError, UnitError,
    ImplausibleValueError
        See :func:`read_site_config` and :func:`read_table`.

    Notes
    -----
    Use :func:`read_site_config` and :func:`read_input` to get the
    :class:`ReadReport` as well.
    """
    site_config = read_site_config(path)
    frame, _ = read_input(site_config)
    return frame, site_config.site


def read_input(site_config: SiteConfig) -> tuple[pd.DataFrame, ReadReport]:
    """Read the records of a parsed site config.

    Parameters
    ----------
    site_config : SiteConfig
        From :func:`read_site_config`.

    Returns
    -------
    frame : pandas.DataFrame
        Canonical frame.
    report : ReadReport
        What was found and done.
    """
    return site_config.read()


def read_site_config(path) -> SiteConfig:
    """Parse and validate the ``[site]`` and ``[input]`` tables of a site TOML.

    Parameters
    ----------
    path : str or path-like
        The site config file.

    Returns
    -------
    SiteConfig

    Raises
    ------
    InputFileError
        If the TOML file does not exist or cannot be read.
    ConfigError
        If the TOML is invalid, a table or key is unknown (the nearest valid key is
        suggested), a required key is missing or a value has the wrong type or range.
    UnitError
        If ``[input.units]`` names a unit unknown for its variable.

    Notes
    -----
    ``[site] utc_offset`` and ``[input] time_marks`` are required although
    :class:`Site` and :func:`read_table` have defaults: in a site file a forgotten
    offset or stamp position would silently shift day and night by hours.
    """
    path = Path(path)
    document = read_toml(path, "site config")

    _check_keys(document, _TOP_LEVEL_KEYS, "site config: top-level table", "[{key}]")
    for table in ("site", "input"):
        if table not in document:
            raise ConfigError(f"site config {str(path)!r} has no [{table}] table")
        if not isinstance(document[table], dict):
            raise ConfigError(f"[{table}] must be a table, found {document[table]!r}")
    site_table, input_table = document["site"], document["input"]
    _check_keys(site_table, _SITE_KEYS, "[site]", "{key}")
    _check_keys(input_table, _INPUT_KEYS, "[input]", "{key}")
    for key in _SITE_REQUIRED:
        if key not in site_table:
            raise ConfigError(f"[site] {key} is missing; " + _SITE_HELP[key])
    for key in _INPUT_REQUIRED:
        if key not in input_table:
            raise ConfigError(f"[input] {key} is missing; " + _INPUT_HELP[key])
    site = Site(name=site_table["name"], latitude=site_table["latitude"],
                longitude=site_table["longitude"], utc_offset=site_table["utc_offset"])

    input_path = input_table["path"]
    if not isinstance(input_path, str) or not input_path.strip():
        raise ConfigError(f"[input] path = {input_path!r}: expected a file path (a string, "
                          "relative to the site config)")
    for key in ("time_column", "time_format"):
        if not isinstance(input_table[key], str) or not input_table[key]:
            raise ConfigError(f"[input] {key} = {input_table[key]!r}: expected a non-empty string")
    columns = _string_table(input_table["columns"], "[input.columns]")
    units = _string_table(input_table.get("units", {}), "[input.units]")
    _check_mapping(columns, units)
    return SiteConfig(
        site=site,
        config_path=path,
        input_path=(path.parent / input_path),
        columns=columns,
        units=units,
        time_column=input_table["time_column"],
        time_format=input_table["time_format"],
        time_marks=_check_time_marks(input_table["time_marks"]),
        missing=_check_missing(input_table.get("missing", list(_DEFAULT_MISSING))),
        delimiter=_check_delimiter(input_table.get("delimiter", ",")),
        interval_minutes=_check_interval(input_table.get("interval_minutes")),
        document=document,
    )


def read_table(path, *, columns, units=None, time_column, time_format, time_marks="start",
               missing=_DEFAULT_MISSING, delimiter=",", interval_minutes=None):
    """Read a delimited file of tower records into the canonical frame.

    Parameters
    ----------
    path : str or path-like
        The file; one header line, then one record per line.
    columns : dict
        Canonical name -> column name in the file. A canonical variable not in the
        mapping is read from a file column of its own canonical name if there is one.
    units : dict, optional
        Canonical name -> unit of the file's column, where it is not the canonical
        unit (spellings: :func:`fluxpart.variables.units_for`).
    time_column : str
        Column holding the stamps.
    time_format : str
        :func:`datetime.datetime.strptime` format of the stamps (or ``"ISO8601"``).
    time_marks : {"start", "middle", "end"}
        Where each stamp sits in its averaging interval, in the file's local
        standard time.
    missing : sequence of float or str
        Codes meaning "no value". Numbers match within 1e-6 relative; strings match
        whole cells, ignoring case and surrounding blanks. Empty cells and ``NaN`` are
        always missing.
    delimiter : str
        Field delimiter.
    interval_minutes : {30, 60}, optional
        Record interval [minutes]; inferred from the most common spacing if omitted.

    Returns
    -------
    frame : pandas.DataFrame
        Columns ``nee`` [µmol m-2 s-1], ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa],
        ``ustar`` [m s-1] and, where read, ``tsoil`` [°C], ``rh`` [%], ``nee_flag`` [1],
        all float64 with NaN for missing values; index: tz-naive DatetimeIndex named
        ``"time"`` of interval starts with a regular frequency, stamps absent from the
        file inserted as all-NaN rows.
    report : ReadReport
        What was found and done.

    Raises
    ------
    InputFileError
        The file is missing, unreadable, empty or has a duplicated mapped header.
    ConfigError
        A bad setting: unknown canonical name, a column mapped twice, bad
        `time_marks`, `missing`, `delimiter` or `interval_minutes`.
    MissingColumnError
        A required or mapped column is absent; the message lists the file's columns.
    TimestampError
        A stamp does not parse with `time_format` (first bad row named), or stamps
        carry a UTC offset.
    DuplicateTimestampError, NonMonotonicTimestampError
        A stamp repeats, or stamps go backwards (rows named).
    SpacingError
        Spacing is not 30/60 minutes or not a whole multiple of the interval.
    UnitError
        A declared unit is unknown for its variable.
    ImplausibleValueError
        A variable is mostly implausible (see :data:`IMPLAUSIBLE_SHARE`), or a
        column is in an undeclared unit that the values give away; the message
        suggests the unit that would fit.

    Notes
    -----
    Plausibility: a variable stops the reader (ImplausibleValueError) when its
    median lies outside the plausible range of
    :data:`fluxpart.variables.VARIABLES`, or more than :data:`IMPLAUSIBLE_SHARE`
    (5 %) of its present values and at least 5 of them do, or when relative
    humidity read as percent never exceeds 1.05 over at least 48 records (no
    surface air stays that dry: it is a fraction). Fewer outliers are counted in
    the report and left to screening. Values that are plausible but fit a unit
    mix-up only warn: VPD read as hPa that stays below 6 (median below 1.5) while
    never exceeding a tenth of the saturation vapour pressure at ``tair`` (kPa?),
    and NEE whose 99th percentile of ``|NEE|`` is below 1 µmol m-2 s-1
    (mg CO2 m-2 s-1?). Both need at least 48 records.

    Row numbers in messages are given twice: the 1-based data row (blank lines not
    counted) and the line of the file (the header is line 1). Interval starts are
    ``stamp - interval`` for end stamps and ``stamp - interval / 2`` for middle
    stamps, so start-, middle- and end-stamped copies of a record give identical
    frames.
    """
    path = Path(path)
    units = dict(units or {})
    columns = _string_table(columns, "[input.columns]")
    units = _string_table(units, "[input.units]")
    _check_mapping(columns, units)
    time_marks = _check_time_marks(time_marks)
    missing = _check_missing(missing)
    delimiter = _check_delimiter(delimiter)
    interval_minutes = _check_interval(interval_minutes)
    if not isinstance(time_column, str) or not time_column:
        raise ConfigError(f"[input] time_column = {time_column!r}: expected a column name")
    if not isinstance(time_format, str) or not time_format:
        raise ConfigError(f"[input] time_format = {time_format!r}: expected a format string "
                          "such as '%Y-%m-%d %H:%M'")

    raw, lines, header = _read_raw(path, delimiter)
    mapping = _resolve_columns(columns, units, list(raw.columns), header, time_column, path)
    warnings: list[str] = []

    stamps = _parse_stamps(raw[time_column], time_format, time_column, lines)
    _check_order(stamps, raw[time_column], lines)
    interval_minutes = _interval(stamps, interval_minutes, lines, raw[time_column])
    shift_minutes = {"start": 0.0, "middle": interval_minutes / 2,
                     "end": float(interval_minutes)}[time_marks]
    starts = pd.DatetimeIndex(stamps) - pd.Timedelta(minutes=shift_minutes)
    _check_clock_alignment(starts, interval_minutes, time_marks, warnings)

    values: dict[str, np.ndarray] = {}
    missing_cells: dict[str, int] = {}
    for name, column in mapping.items():
        numbers, n_missing = _numbers(raw[column], column, name, missing, lines, warnings)
        missing_cells[name] = n_missing
        values[name] = numbers
    converted = {name: to_canonical(numbers, name, units.get(name))
                 for name, numbers in values.items()}
    for name in converted:
        _check_plausible(name, converted[name], values[name], units.get(name), mapping[name],
                         missing)
    _suspect_units(converted, units, warnings)

    derived: list[str] = []
    source_of = dict(mapping)
    if "vpd" not in converted:
        converted["vpd"] = vpd_from_rh(converted["rh"], converted["tair"])
        derived.append("vpd")
        source_of["vpd"] = "derived from rh and tair"

    order = [name for name in VARIABLES if name in converted]
    frame = pd.DataFrame({name: converted[name].astype(np.float64) for name in order},
                         index=starts)
    full = pd.date_range(starts[0], starts[-1], freq=f"{interval_minutes}min", name="time")
    inserted = full.difference(starts)
    frame = frame.reindex(full)
    frame.index.name = "time"
    ranges, runs = _runs(inserted, interval_minutes)
    if len(full) and len(inserted) > 0.25 * len(full):
        warnings.append(f"{len(inserted)} of {len(full)} stamps ({len(inserted) / len(full):.0%}) "
                        "are absent from the file and were inserted as missing; check "
                        "interval_minutes and whether the file changes its interval")

    for name in mapping:
        if not np.isfinite(converted[name]).any():
            warnings.append(f"{name}: column {mapping[name]!r} has no values at all "
                            "(every cell empty or a missing code)")
    outside = {}
    for name in order:
        variable = VARIABLES[name]
        column = frame[name].to_numpy()
        outside[name] = int(np.sum((column < variable.minimum) | (column > variable.maximum)))
        if outside[name]:
            warnings.append(f"{name}: {outside[name]} value(s) outside the plausible range "
                            f"[{variable.minimum:g}, {variable.maximum:g}] {variable.unit}; "
                            "screening will reject them")
    report = ReadReport(
        source=str(path),
        interval_minutes=interval_minutes,
        time_marks=time_marks,
        shift_minutes=shift_minutes,
        records_read=len(raw),
        records=len(frame),
        first_start=full[0] if len(full) else None,
        last_start=full[-1] if len(full) else None,
        stamps_inserted=len(inserted),
        inserted_ranges=ranges,
        inserted_runs=runs,
        columns={name: source_of[name] for name in order},
        units={name: units[name] for name in order if name in units},
        missing_codes=missing,
        derived=tuple(derived),
        missing_cells={name: missing_cells.get(name, 0) for name in order if name in mapping},
        outside_range=outside,
        warnings=tuple(warnings),
    )
    return frame, report


# --------------------------------------------------------------------------- config


_SITE_HELP = {
    "name": "give the site a name, e.g. name = \"Hollow Fen\"",
    "latitude": "give the tower latitude in degrees north (negative south), e.g. latitude = 48.1",
    "longitude": "give the tower longitude in degrees east (negative west), e.g. longitude = 10.9",
    "utc_offset": "give the offset of the file's local standard time from UTC in hours "
                  "(no daylight saving), e.g. utc_offset = 1.0",
}
_INPUT_HELP = {
    "path": "give the record file, relative to the site config, e.g. path = \"tower.csv\"",
    "time_column": "name the column holding the stamps, e.g. time_column = \"timestamp\"",
    "time_format": "give the stamp format, e.g. time_format = \"%Y-%m-%d %H:%M\"",
    "time_marks": "say where the stamps sit in their averaging interval: "
                  "time_marks = \"start\", \"middle\" or \"end\"",
    "columns": "add an [input.columns] table: canonical name = column in the file",
}


def _check_keys(table: dict, valid, where: str, spell: str) -> None:
    for key in table:
        if key not in valid:
            hint = suggest_key(key, valid)
            raise ConfigError(f"{where} {spell.format(key=key)} is unknown{hint}")


def _string_table(table, where: str) -> dict:
    if not isinstance(table, dict):
        raise ConfigError(f"{where} must be a table of name = \"text\", found {table!r}")
    out = {}
    for key, value in table.items():
        if key not in VARIABLES:
            raise ConfigError(f"{where} {key} is not a canonical variable"
                              f"{suggest_key(key, VARIABLES)} (valid: {', '.join(VARIABLES)})")
        if not isinstance(value, str) or not value:
            raise ConfigError(f"{where} {key} = {value!r}: expected a non-empty string")
        out[key] = value
    return out


def _check_mapping(columns: dict, units: dict) -> None:
    seen: dict[str, str] = {}
    for name, column in columns.items():
        if column in seen:
            raise ConfigError(f"[input.columns] file column {column!r} is mapped twice, to "
                              f"{seen[column]} and to {name}; each canonical variable needs "
                              "its own column")
        seen[column] = name
    for name, unit in units.items():
        to_canonical(np.empty(0), name, unit)  # raises UnitError listing the accepted units


def _check_time_marks(value) -> str:
    if value not in TIME_MARKS:
        close = difflib.get_close_matches(str(value), TIME_MARKS, n=1, cutoff=0.4)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise ConfigError(f"[input] time_marks = {value!r}: expected one of "
                          f"{', '.join(repr(m) for m in TIME_MARKS)}{hint}")
    return value


def _check_missing(value) -> tuple:
    if isinstance(value, (str, int, float)) and not isinstance(value, bool):
        value = [value]
    if not isinstance(value, (list, tuple)):
        raise ConfigError(f"[input] missing = {value!r}: expected a list of codes, "
                          "e.g. missing = [-9999, \"NA\"]")
    for code in value:
        if isinstance(code, bool) or not isinstance(code, (str, int, float)):
            raise ConfigError(f"[input] missing: code {code!r} must be a number or a string")
    return tuple(value)


def _check_delimiter(value) -> str:
    if not isinstance(value, str) or len(value) != 1:
        raise ConfigError(f"[input] delimiter = {value!r}: expected a single character such "
                          "as \",\", \";\" or \"\\t\"")
    return value


def _check_interval(value):
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) \
            or value not in INTERVALS_MINUTES:
        raise ConfigError(f"[input] interval_minutes = {value!r}: expected 30 or 60, "
                          "or leave it out to infer it from the stamps")
    return int(value)


# --------------------------------------------------------------------------- file


def _read_raw(path: Path, delimiter: str) -> tuple[pd.DataFrame, np.ndarray, list]:
    """Read every cell as text; return the non-blank rows, their line numbers, the header."""
    if not path.exists():
        raise InputFileError(f"[input] path: input file {str(path)!r} does not exist")
    if not path.is_file():
        raise InputFileError(f"[input] path: {str(path)!r} is not a file")
    options = {"sep": delimiter, "dtype": str, "keep_default_na": False, "na_filter": False,
               "encoding": "utf-8-sig"}
    try:
        raw = pd.read_csv(path, skip_blank_lines=False, **options)
        header = pd.read_csv(path, header=None, nrows=1, **options).iloc[0].tolist()
    except pd.errors.EmptyDataError:
        raise InputFileError(f"input file {str(path)!r} is empty; expected a header line "
                             "and records") from None
    except pd.errors.ParserError as error:
        raise InputFileError(f"input file {str(path)!r} cannot be parsed with delimiter "
                             f"{delimiter!r}: {error}") from None
    except (OSError, UnicodeDecodeError) as error:
        raise InputFileError(f"input file {str(path)!r} cannot be read: {error}") from None
    blank = (raw.apply(lambda column: column.str.strip()) == "").all(axis=1).to_numpy()
    lines = np.arange(len(raw)) + 2
    raw = raw.loc[~blank].reset_index(drop=True)
    lines = lines[~blank]
    if raw.empty:
        raise InputFileError(f"input file {str(path)!r} has a header but no records")
    return raw, lines, [str(h) for h in header]


def _resolve_columns(columns: dict, units: dict, file_columns: list, header: list,
                     time_column: str, path: Path) -> dict:
    """Canonical name -> file column, in canonical order; check presence and duplicates."""
    if time_column not in file_columns:
        raise MissingColumnError(f"[input] time_column = {time_column!r}: no such column in "
                                 f"{str(path)!r}{_near(time_column, file_columns)}; "
                                 f"{_columns_listing(file_columns)}")
    mapping = {}
    for name, column in columns.items():
        if column not in file_columns:
            raise MissingColumnError(f"[input.columns] {name} = {column!r}: no such column in "
                                     f"{str(path)!r}{_near(column, file_columns)}; "
                                     f"{_columns_listing(file_columns)}")
        if column == time_column:
            raise ConfigError(f"[input.columns] {name} = {column!r} is the time column")
        mapping[name] = column
    used = set(mapping.values()) | {time_column}
    for name in VARIABLES:
        if name not in mapping and name in file_columns and name not in used:
            mapping[name] = name
    needed = [name for name in REQUIRED if name != "vpd"]
    if "vpd" not in mapping and "rh" not in mapping:
        needed.append("vpd")
    for name in needed:
        if name not in mapping:
            also = " (or map rh, from which vpd is derived with tair)" if name == "vpd" else ""
            raise MissingColumnError(f"[input.columns] {name} is not mapped and {str(path)!r} "
                                     f"has no column {name!r}; add {name} = \"<column>\"{also}; "
                                     f"{_columns_listing(file_columns)}")
    for name in units:
        if name not in mapping:
            raise ConfigError(f"[input.units] {name} = {units[name]!r} is given but no {name} "
                              "column is read; map it in [input.columns] or remove the unit")
    # pandas renames repeated headers 'x', 'x.1', ...; a mapped name must be unambiguous
    duplicated = {h for h in header if header.count(h) > 1}
    for name, column in list(mapping.items()) + [("time", time_column)]:
        if column in duplicated:
            raise InputFileError(f"column {column!r} (for {name}) appears more than once in the "
                                 f"header of {str(path)!r}; rename the copies")
    return {name: mapping[name] for name in VARIABLES if name in mapping}


def _near(name: str, options: list) -> str:
    close = difflib.get_close_matches(name, [str(o) for o in options], n=1, cutoff=0.6)
    if not close:
        stripped = [o for o in options if str(o).strip() == name.strip()]
        close = stripped[:1]
    return f" (did you mean {close[0]!r}?)" if close else ""


def _columns_listing(file_columns: list) -> str:
    listing = f"the file has columns: {', '.join(repr(c) for c in file_columns)}"
    if len(file_columns) == 1:
        for candidate in (";", "\t", ",", " ", "|"):
            if candidate in str(file_columns[0]):
                listing += (f"; the single header cell contains {candidate!r}: set [input] "
                            f"delimiter = {candidate!r}")
                break
    return listing


def _where(lines: np.ndarray, position: int) -> str:
    return f"data row {position + 1} (line {int(lines[position])} of the file)"


# --------------------------------------------------------------------------- time


def _parse_stamps(text: pd.Series, time_format: str, time_column: str,
                  lines: np.ndarray) -> pd.DatetimeIndex:
    cleaned = text.str.strip()
    try:
        stamps = pd.to_datetime(cleaned, format=time_format, errors="coerce")
    except (ValueError, TypeError) as error:
        raise TimestampError(f"[input] time_format = {time_format!r} cannot be used: "
                             f"{error}") from None
    bad = stamps.isna().to_numpy()
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        hint = ""
        if "24:00" in cleaned.iloc[first] or cleaned.iloc[first].endswith("2400"):
            hint = ("; hour 24 is not a valid clock time: stamp midnight as 00:00 of the "
                    "next day")
        elif first == 0:
            hint = "; if the file has a units line under the header, remove it from a copy"
        raise TimestampError(
            f"[input] time_column {time_column!r}: {_where(lines, first)} has stamp "
            f"{cleaned.iloc[first]!r}, which does not match time_format = {time_format!r}; "
            f"{int(bad.sum())} stamp(s) fail to parse{hint}")
    index = pd.DatetimeIndex(stamps)
    if index.tz is not None:
        raise TimestampError(f"[input] time_column {time_column!r}: stamps carry a UTC offset "
                             f"({index[0]}); fluxpart expects local standard time without "
                             "offset; give the site's offset as [site] utc_offset")
    return index


def _check_order(stamps: pd.DatetimeIndex, text: pd.Series, lines: np.ndarray) -> None:
    duplicated = stamps.duplicated(keep=False)
    if duplicated.any():
        first = int(np.flatnonzero(duplicated)[0])
        rows = np.flatnonzero(stamps == stamps[first])
        listed = ", ".join(_where(lines, int(r)) for r in rows[:5])
        raise DuplicateTimestampError(
            f"stamp {text.iloc[first].strip()!r} occurs {len(rows)} times: {listed}; "
            f"{int(stamps.duplicated().sum())} repeated stamp(s) in all. A repeated hour "
            "often means daylight-saving time: fluxpart expects local standard time")
    steps = (stamps[1:] - stamps[:-1]) / pd.Timedelta(seconds=1)
    backwards = np.flatnonzero(np.asarray(steps) < 0)
    if backwards.size:
        row = int(backwards[0]) + 1
        raise NonMonotonicTimestampError(
            f"stamps go backwards at {_where(lines, row)}: {text.iloc[row].strip()!r} comes "
            f"after {text.iloc[row - 1].strip()!r}; sort a copy of the file by time")


def _interval(stamps: pd.DatetimeIndex, declared, lines: np.ndarray, text: pd.Series) -> int:
    steps = np.asarray((stamps[1:] - stamps[:-1]) / pd.Timedelta(minutes=1), dtype=float)
    if declared is None:
        if steps.size == 0:
            raise SpacingError("the file has a single record, so its interval cannot be "
                               "inferred; set [input] interval_minutes = 30 or 60")
        found, counts = np.unique(steps, return_counts=True)
        typical = float(found[np.argmax(counts)])
        if typical not in INTERVALS_MINUTES:
            share = counts.max() / steps.size
            raise SpacingError(f"the most common spacing between stamps is {typical:g} minutes "
                               f"({share:.0%} of steps); fluxpart needs 30- or 60-minute "
                               "records: average the file to 30 or 60 minutes first")
        declared = int(typical)
    irregular = np.flatnonzero(np.abs(steps / declared - np.round(steps / declared)) > 1e-9)
    if irregular.size:
        row = int(irregular[0]) + 1
        found = sorted({f"{s:g}" for s in steps[irregular][:10]})
        raise SpacingError(
            f"stamps are {steps[irregular[0]]:g} minutes apart at {_where(lines, row)} "
            f"({text.iloc[row - 1].strip()!r} -> {text.iloc[row].strip()!r}), not a whole "
            f"multiple of the {declared}-minute interval; {irregular.size} such step(s), "
            f"spacings found: {', '.join(found)} minutes")
    return declared


def _check_clock_alignment(starts: pd.DatetimeIndex, interval_minutes: int, time_marks: str,
                           warnings: list) -> None:
    midnight = starts.normalize()
    offset = np.asarray((starts - midnight) / pd.Timedelta(minutes=1), dtype=float)
    off_grid = np.mod(offset, interval_minutes) != 0
    if off_grid.any():
        minute = offset[np.flatnonzero(off_grid)[0]] % 60
        warnings.append(f"interval starts fall at minute {minute:g} of the hour, not on the "
                        f"{interval_minutes}-minute clock grid; check [input] time_marks = "
                        f"{time_marks!r}")


def _runs(inserted: pd.DatetimeIndex, interval_minutes: int) -> tuple[tuple, int]:
    if len(inserted) == 0:
        return (), 0
    steps = np.asarray((inserted[1:] - inserted[:-1]) / pd.Timedelta(minutes=interval_minutes))
    breaks = np.flatnonzero(steps != 1)
    starts = np.concatenate([[0], breaks + 1])
    ends = np.concatenate([breaks, [len(inserted) - 1]])
    ranges = tuple((inserted[s], inserted[e], int(e - s + 1))
                   for s, e in zip(starts[:_RANGES_SHOWN], ends[:_RANGES_SHOWN], strict=True))
    return ranges, len(starts)


# --------------------------------------------------------------------------- values


def _numbers(text: pd.Series, column: str, name: str, missing: tuple, lines: np.ndarray,
             warnings: list) -> tuple[np.ndarray, int]:
    """Parse a text column to float with missing codes as NaN; return values, missing count."""
    cleaned = text.str.strip()
    folded = cleaned.str.casefold()
    string_codes = {str(c).strip().casefold() for c in missing if isinstance(c, str)}
    numeric_codes = [float(c) for c in missing if not isinstance(c, str)]
    for code in missing:
        if isinstance(code, str):
            try:
                numeric_codes.append(float(code))
            except ValueError:
                pass
    is_code = folded.isin(string_codes).to_numpy() | (cleaned == "").to_numpy() \
        | folded.isin(_FLOAT_SPELLINGS_OF_NAN).to_numpy()
    numbers = pd.to_numeric(cleaned.where(~is_code, None), errors="coerce").to_numpy(
        dtype=float, na_value=np.nan)
    bad = np.isnan(numbers) & ~is_code
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        cell = cleaned.iloc[first]
        hint = ""
        if "," in cell and pd.notna(pd.to_numeric(cell.replace(",", "."), errors="coerce")):
            hint = "; it looks like a decimal comma: convert a copy of the file to decimal points"
        else:
            hint = f"; if {cell!r} marks missing data, add it to [input] missing"
        raise InputFileError(f"column {column!r} ({name}): {_where(lines, first)} has "
                             f"{cell!r}, which is not a number; {int(bad.sum())} such cell(s)"
                             f"{hint}")
    for code in numeric_codes:
        tolerance = 1e-6 * max(1.0, abs(code))
        is_code = is_code | (np.abs(numbers - code) <= tolerance)
    infinite = np.isinf(numbers) & ~is_code
    if infinite.any():
        warnings.append(f"column {column!r} ({name}): {int(infinite.sum())} infinite value(s) "
                        f"read as missing, first at {_where(lines, int(np.flatnonzero(infinite)[0]))}")
        is_code = is_code | infinite
    numbers = np.where(is_code, np.nan, numbers)
    return numbers, int(is_code.sum())


def _outside(name: str, values: np.ndarray) -> np.ndarray:
    variable = VARIABLES[name]
    return (values < variable.minimum) | (values > variable.maximum)


def _check_plausible(name: str, canonical: np.ndarray, file_values: np.ndarray, unit,
                     column: str, missing: tuple) -> None:
    """Raise ImplausibleValueError for a mostly implausible column, with a likely cause."""
    variable = VARIABLES[name]
    if not (math.isfinite(variable.minimum) or math.isfinite(variable.maximum)):
        return
    present = canonical[np.isfinite(canonical)]
    if present.size == 0:
        return
    outside = _outside(name, present)
    median = float(np.median(present))
    share = outside.mean()
    median_outside = bool(_outside(name, np.array([median]))[0])
    fraction_rh = name == "rh" and unit in (None, "%") and present.size >= 48 \
        and np.nanmax(present) <= 1.05
    mostly_outside = share > IMPLAUSIBLE_SHARE and outside.sum() >= _IMPLAUSIBLE_MIN_COUNT
    if not (median_outside or mostly_outside or fraction_rh):
        return
    declared = unit if unit is not None else variable.unit
    message = (f"column {column!r} ({name}, read as {declared!r}): {int(outside.sum())} of "
               f"{present.size} present values ({share:.1%}) lie outside the plausible range "
               f"[{variable.minimum:g}, {variable.maximum:g}] {variable.unit}; median "
               f"{median:.4g} {variable.unit}")
    if fraction_rh:
        message = (f"column {column!r} (rh, read as '%'): all {present.size} values are at "
                   f"most {np.nanmax(present):.3g} %, which no surface air stays below; it looks "
                   "like a fraction: set [input.units] rh = \"fraction\"")
        raise ImplausibleValueError(message)
    raw_present = file_values[np.isfinite(file_values)]
    outside_raw = raw_present[_outside(name, to_canonical(raw_present, name, unit))]
    codes, counts = np.unique(outside_raw, return_counts=True)
    code = codes[np.argmax(counts)] if counts.size else np.nan
    # a missing-data code explains the problem when all else is plausible without it
    rest = present[raw_present != code]
    if counts.size and counts.max() >= 3 and (
            rest.size == 0 or _outside(name, rest).mean() <= IMPLAUSIBLE_SHARE):
        message += (f"; the value {code:g} alone occurs {counts.max()} times: if it marks "
                    f"missing data, add it to [input] missing (now {list(missing)})")
    else:
        better = _better_units(name, raw_present, unit)
        if better:
            message += (f"; the values look like {better[0]!r}: set [input.units] {name} = "
                        f"\"{better[0]}\"")
        else:
            message += ("; check the column mapping and [input.units]; if these are "
                        "instrument faults, mark them with a missing code (or the site flag) "
                        "in a copy of the file")
    raise ImplausibleValueError(message)


def _better_units(name: str, raw_present: np.ndarray, declared) -> list:
    """Accepted units (other than `declared`) under which the values are plausible, best first."""
    probe = np.array([1.0, 2.0])
    declared_probe = to_canonical(probe, name, declared)
    candidates, seen = [], []
    for unit in units_for(name):
        converted_probe = to_canonical(probe, name, unit)
        if np.allclose(converted_probe, declared_probe) or any(
                np.allclose(converted_probe, other) for other in seen):
            continue
        seen.append(converted_probe)
        values = to_canonical(raw_present, name, unit)
        if _outside(name, values).mean() <= 0.01 and not _outside(
                name, np.array([np.median(values)]))[0]:
            scale = max(float(np.percentile(np.abs(values), 90)), 1e-12)
            low, high = _TYPICAL_P90[name]
            distance = max(math.log10(low / scale), math.log10(scale / high), 0.0)
            candidates.append((distance, unit))
    return [unit for _, unit in sorted(candidates)]


def _suspect_units(converted: dict, units: dict, warnings: list) -> None:
    """Warn about plausible-looking values that a wrong unit would also explain."""
    vpd, tair = converted.get("vpd"), converted.get("tair")
    if vpd is not None and tair is not None and units.get("vpd") in (None, "hPa"):
        both = np.isfinite(vpd) & np.isfinite(tair)
        if both.sum() >= 48:
            ratio = vpd[both] / saturation_vapour_pressure(tair[both])
            if (np.nanmax(vpd[both]) < 6.0 and np.median(vpd[both]) < 1.5
                    and np.percentile(ratio, 99) < 0.1):
                warnings.append(
                    "vpd: read as hPa, but all values are below 6 and never exceed a tenth of "
                    "the saturation vapour pressure at tair (relative humidity would never drop "
                    "below 90 %); if the file is in kPa, set [input.units] vpd = \"kPa\"")
    nee = converted.get("nee")
    if nee is not None and units.get("nee") in (None, "µmol m-2 s-1", "umol m-2 s-1"):
        present = np.abs(nee[np.isfinite(nee)])
        if present.size >= 48 and np.percentile(present, 99) < 1.0:
            warnings.append(
                "nee: read as µmol m-2 s-1, but 99 % of |values| are below 1; a half-hourly "
                "flux record is rarely that small: if the file is in mg CO2 m-2 s-1, set "
                "[input.units] nee = \"mg CO2 m-2 s-1\"")


def _stamp(value) -> str:
    return "-" if value is None else pd.Timestamp(value).strftime("%Y-%m-%d %H:%M")
