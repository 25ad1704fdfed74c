"""Typed tables as a tower database or a script writes them: Parquet, Arrow, JSON Lines.

A file of records in Apache Parquet, the Arrow IPC file format (Feather, versions 1 and
2), JSON Lines (one JSON object a record; ``.jsonl``, ``.ndjson``, gzipped or not) or a
JSON array of objects is turned into the comma-separated text the reader of
:mod:`fluxpart.io` reads, one header line of the columns' names and one line a record,
so that every check of a text table (units, stamps, flags, overlaps, notes) applies
unchanged. The text is an exact copy, not a rounding:

- floating-point values are written as the shortest decimal that reads back as the same
  binary64 number (Arrow's float-to-string cast, Steele & White / Ryu-style shortest
  round trip; Python's ``repr`` for JSON, whose numbers Python's ``json`` parses
  correctly rounded) and read back by Arrow's correctly rounded string-to-double cast,
  so each value reaches the pipeline bit for bit as stored (binary32 values widened
  exactly first);
- integers, decimals and strings are written as they are; booleans as 1 and 0;
- nulls (and JSON ``null`` or a key a record lacks) are empty cells, missing values;
- typed stamps (Arrow timestamps, dates and times of day) are written in ISO 8601 order,
  to the microsecond where any has a finer part than the second (a stamp or a time of
  day finer than a microsecond is refused), and read under a format of their own
  (:attr:`TableText.time_format`), whatever
  ``[input] time_format`` says, which applies to stamps stored as text or numbers.

A pandas index stored in the file (``DataFrame.to_parquet``: a DatetimeIndex, named or
not, with or without a time zone) is a column: under its name, or ``"index"`` where it
has none (``"level_0"``, ``"level_1"``, ... for the levels of an unnamed MultiIndex), as
``DataFrame.reset_index`` names it; a RangeIndex, which holds no values, is left out.

A stamp with a time zone is an instant. Where ``[input] time_format`` holds ``%z`` (or is
``ISO8601``) each stamp is read by its own offset, converted to local standard time as
written offsets are. Otherwise the file's clock must be the one the config reads stamps
in (``[site] utc_offset``, or ``[input] time_zone``) at every stamp; a file whose clock
differs is refused naming both, as two readings of one stamp are (DESIGN.md §4.1).

Refused with one message: a mapped column of nested values (lists, structs, maps), a
Parquet file whose row groups disagree with its schema, a record of JSON Lines that is
not an object, a file pyarrow cannot read. Record numbers in messages count records
from 1 (:func:`record_wording`), where a text file's count lines.

References
----------
Apache Parquet, "File Format" and "Metadata" (row groups, schema) (m); Apache Arrow,
"Columnar format: IPC file format" and "Feather File Format" (m); pandas, "pandas
metadata" of ``to_parquet`` (``index_columns``, ``range`` index) (m); JSON Lines,
jsonlines.org (m); RFC 8259, The JavaScript Object Notation (JSON) Data Interchange
Format; ISO 8601-1:2019, Date and time representations; Steele, G. L. and White, J. L.
(1990). How to print floating-point numbers accurately. PLDI '90, 112-126 (m).
"""

from __future__ import annotations

import io
import json
import re
from datetime import timedelta, timezone

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .errors import InputFileError, TimestampError

#: Format of typed stamps in the written text, and the formats they are read under.
STAMP_FORMAT = "%Y-%m-%d %H:%M:%S"
_OFFSET_FORMAT = STAMP_FORMAT + "%z"
_DATE_FORMAT, _TIME_FORMAT = "%Y-%m-%d", "%H:%M:%S"


class TableText(str):
    """The text of a typed table, and how it was made.

    Attributes
    ----------
    kind : str
        The format in words ("a Parquet file", ...).
    time_format : str or None
        The format the mapped time column(s) are read under where they were typed
        stamps, else None (``[input] time_format`` applies).
    index_names : tuple of str
        The columns an unnamed pandas index was given ("index"), named where a mapped
        column is not found.
    """

    def __new__(cls, text: str, kind: str, time_format: str | None = None,
                index_names: tuple = ()):
        made = super().__new__(cls, text)
        made.kind, made.time_format, made.index_names = kind, time_format, index_names
        return made


def binary_kind(data: bytes) -> str:
    """The typed binary format `data` is in, or "".

    Parameters
    ----------
    data : bytes
        The file's bytes, decompressed.

    Returns
    -------
    str
        "a Parquet file", "an Arrow (Feather) file", "a Feather (version 1) file" or "".

    References
    ----------
    Apache Parquet, "File Format": "PAR1" at the start and the end (m); Apache Arrow,
    "IPC File Format": "ARROW1" at both ends; Feather version 1: "FEA1" (m).
    """
    if data.startswith(b"PAR1") and data.endswith(b"PAR1"):
        return "a Parquet file"
    # the Arrow IPC file format, and Feather version 1 before it, open and close with
    # these bytes (both ends: a text table whose header opens so stays a text table)
    if data.startswith(b"ARROW1") and data.endswith(b"ARROW1"):
        return "an Arrow (Feather) file"
    if data.startswith(b"FEA1") and data.endswith(b"FEA1"):
        return "a Feather (version 1) file"
    return ""


def json_kind(text: str) -> str:
    """"JSON Lines" or "a JSON array" where `text` holds records so, else "".

    JSON Lines: the first two non-blank lines are JSON objects. An array: the text opens
    with ``[`` and an object (``[{``, blanks aside). A title line of JSON above a
    delimited table (its next line no object) is neither.

    Parameters
    ----------
    text : str
        The decoded file.

    Returns
    -------
    str
        "JSON Lines", "a JSON array" or "".

    References
    ----------
    JSON Lines, jsonlines.org (m); RFC 8259, section 2 (an array, an object) (m).
    """
    head = text.lstrip()
    if head.startswith("["):
        return "a JSON array" if head[1:].lstrip().startswith("{") else ""
    if not head.startswith("{"):
        return ""
    nonblank = [line for line in head[:65536].splitlines()[:3] if line.strip()]
    for line in nonblank[:2]:
        try:
            if not isinstance(json.loads(line), dict):
                return ""
        except ValueError:
            return ""
    return "JSON Lines" if nonblank else ""


def table_text(data: bytes | str, path, kind: str, *, wanted=(), clock=None) -> TableText:
    """The typed table `data` (bytes of a binary format, text of JSON) as CSV text.

    Parameters
    ----------
    data : bytes or str
        The file decompressed: bytes for Parquet and Arrow, decoded text for JSON.
    path : path-like
        The file, named in messages.
    kind : str
        :func:`binary_kind` or :func:`json_kind` of it.
    wanted : sequence of str
        Column names the config maps: a nested column among them is refused, others
        are left out.
    clock : dict, optional
        ``time_columns``, ``time_format``, ``utc_offset`` [h] and ``time_zone`` of the
        config, which decide how typed stamps of the mapped time column(s) are written;
        None writes stamps with a time zone with their offset (a reading of the layout
        only, never of the records).

    Returns
    -------
    TableText
    """
    source = str(path)
    if kind.startswith("JSON") or kind == "a JSON array":
        columns = _json_columns(data, source, kind, wanted)
        stamp_formats, index_names = {}, ()
    else:
        table = _arrow_table(data, source, kind)
        columns, stamp_formats = _arrow_columns(table, source, wanted, clock)
        index_names = tuple(_index_names(table).values())
    time_format = None
    if clock is not None and clock["time_columns"] and all(
            name in stamp_formats for name in clock["time_columns"]):
        time_format = " ".join(stamp_formats[name] for name in clock["time_columns"])
    frame = pd.DataFrame(columns)
    buffer = io.StringIO()
    frame.to_csv(buffer, index=False, na_rep="", lineterminator="\n")
    return TableText(buffer.getvalue(), kind, time_format, index_names)


def record_wording(message: str) -> str:
    """`message` with the line numbers of the written text as record places.

    The written text's header is line 1, so its line ``n`` is record ``n - 1``: "line
    5" becomes "record 4", "lines 3 to 7" "records 2 to 6", "data line" "record", "that
    line" "that record".

    Parameters
    ----------
    message : str
        A message of the text reader about the written text.

    Returns
    -------
    str
        The message counting records.
    """
    def place(match):
        numbers = re.sub(r"\d+", lambda n: str(int(n.group()) - 1), match.group("numbers"))
        word = "records" if match.group("plural") else "record"
        return f"{word} {numbers}"

    numbered = re.sub(
        r"\b(?:data )?line(?P<plural>s)? (?P<numbers>\d+(?:(?:, | to | and |-)\d+)*)",
        place, message)
    return re.sub(r"\b(that|this|the|each|every) line(s?)\b", r"\1 record\2", numbered)


# --------------------------------------------------------------------------- Arrow
def _arrow_table(data: bytes, source: str, kind: str) -> pa.Table:
    """The file's table (Parquet's row groups checked against its schema)."""
    buffer = pa.BufferReader(data)
    try:
        if kind == "a Parquet file":
            import pyarrow.parquet as pq

            parquet = pq.ParquetFile(buffer)
            _refuse_differing_row_groups(parquet, source)
            return parquet.read()
        import pyarrow.feather as feather

        return feather.read_table(buffer)
    except (pa.ArrowException, OSError, ValueError) as error:
        shown = str(error).splitlines()[0][:160] if str(error) else type(error).__name__
        raise InputFileError(f"input file {source!r} is {kind} that pyarrow cannot read "
                             f"({shown}): a copy cut short? Write it again") from None


def _refuse_differing_row_groups(parquet, source: str) -> None:
    """Refuse a Parquet file one of whose row groups holds other columns or physical
    types than the file's schema (a file joined from parts written apart)."""
    meta = parquet.metadata
    schema = parquet.schema
    expected = [(schema.column(j).path, schema.column(j).physical_type)
                for j in range(len(schema))]
    for i in range(meta.num_row_groups):
        group = meta.row_group(i)
        found = [(group.column(j).path_in_schema, group.column(j).physical_type)
                 for j in range(group.num_columns)]
        if found != expected:
            raise InputFileError(
                f"input file {source!r}: row group {i + 1} of {meta.num_row_groups} holds "
                f"other columns or types than the file's schema ({len(found)} columns, "
                f"schema {len(expected)}): its parts were written with different schemas; "
                "write the records again as one table")


def _index_names(table: pa.Table) -> dict:
    """Field name -> column name of the pandas index levels stored as columns."""
    meta = (table.schema.metadata or {}).get(b"pandas")
    if not meta:
        return {}
    try:
        stored = json.loads(meta)["index_columns"]
    except (ValueError, KeyError, TypeError):
        return {}
    levels = [name for name in stored if isinstance(name, str)]   # a range index: a dict
    taken = set(table.column_names) - set(levels)
    names = {}
    for number, name in enumerate(levels):
        if re.fullmatch(r"__index_level_\d+__", name):
            own = "index" if len(levels) == 1 else f"level_{number}"
            names[name] = own if own not in taken else name
    return names


def _arrow_columns(table: pa.Table, source: str, wanted, clock) -> tuple[dict, dict]:
    """Column name -> text cells (None for null), and name -> stamp format of typed
    stamp columns."""
    renamed = _index_names(table)
    index_first = [name for name in table.column_names if name in renamed] + [
        name for name in table.column_names if name not in renamed]
    columns, formats = {}, {}
    for field_name in index_first:
        name = renamed.get(field_name, field_name)
        column = table.column(field_name).combine_chunks()
        if pa.types.is_dictionary(column.type):
            column = column.dictionary_decode()
        kind = column.type
        if pa.types.is_nested(kind) or pa.types.is_binary(kind) or \
                pa.types.is_large_binary(kind) or pa.types.is_fixed_size_binary(kind):
            if name in wanted:
                raise InputFileError(
                    f"input file {source!r}: column {name!r} holds {kind} values, not one "
                    "number or text a record; write it as plain columns (one value a "
                    "record) in a copy")
            continue
        if pa.types.is_timestamp(kind):
            cells, formats[name] = _stamp_cells(column, name, source, clock)
        elif pa.types.is_date(kind):
            cells, formats[name] = pc.cast(column, pa.string()), _DATE_FORMAT
        elif pa.types.is_time(kind):
            cells, formats[name] = _time_of_day_cells(column, name, source)
        elif pa.types.is_floating(kind):
            cells = pc.cast(column.cast(pa.float64()), pa.string())
        elif pa.types.is_boolean(kind):
            cells = pc.cast(column.cast(pa.int8()), pa.string())
        elif pa.types.is_null(kind):
            cells = pa.nulls(len(column), pa.string())
        else:
            cells = pc.cast(column, pa.string())
        columns[name] = cells.to_numpy(zero_copy_only=False)
    return columns, formats


def _time_of_day_cells(column: pa.Array, name: str, source: str) -> tuple:
    """Text of a time-of-day column (Arrow time32/time64) and its format, exact.

    Whole seconds are written "%H:%M:%S"; a column with a finer part anywhere is written
    to the microsecond ("%H:%M:%S.%f", the finest the stamp parser reads), and one with
    a part finer than a microsecond (time64 in ns) is refused naming the column and the
    first record, as no reading keeps it.
    """
    whole = column.cast(pa.time32("s"), safe=False)
    if not bool(pc.any(pc.not_equal(whole.cast(column.type), column)).as_py()):
        return pc.cast(whole, pa.string()), _TIME_FORMAT
    micro = _to_microseconds(column, pa.time64("us"), name, source, "times of day")
    return pc.cast(micro, pa.string()), _TIME_FORMAT + ".%f"


def _to_microseconds(column: pa.Array, unit: pa.DataType, name: str, source: str,
                     what: str) -> pa.Array:
    """`column` cast to `unit` (a microsecond type), refused naming the column and the
    first record where a value has a part finer than a microsecond (nanoseconds), as no
    reading keeps it."""
    micro = column.cast(unit, safe=False)
    finer = pc.fill_null(pc.not_equal(micro.cast(column.type), column), False)
    if bool(pc.any(finer).as_py()):
        record = int(np.flatnonzero(finer.to_numpy(zero_copy_only=False))[0]) + 1
        shown = pc.cast(column.slice(record - 1, 1), pa.string())[0].as_py()
        raise TimestampError(
            f"input file {source!r}: column {name!r} holds {what} finer than a "
            f"microsecond (record {record}: {shown}); the reader keeps "
            "microseconds at most: round them to the microsecond in a copy")
    return micro


def _stamp_cells(column: pa.Array, name: str, source: str, clock) -> tuple:
    """Text of a timestamp column and the format it is read under (see the module)."""
    whole = column.cast(pa.timestamp("s", column.type.tz), safe=False)
    fraction = bool(pc.any(pc.not_equal(whole.cast(column.type), column)).as_py())
    seconds = STAMP_FORMAT + (".%f" if fraction else "")
    shown = (_to_microseconds(column, pa.timestamp("us", column.type.tz), name, source,
                              "stamps") if fraction else whole)
    mapped = clock is not None and name in clock["time_columns"]
    if column.type.tz is None:
        if mapped and "%z" in clock["time_format"]:
            raise TimestampError(
                f"input file {source!r}: [input] time_format = {clock['time_format']!r} "
                f"reads an offset from each stamp, but the stamps {name!r} are timestamps "
                "without a time zone; take %z out of time_format (they are then read in "
                "the config's clock), or store them with their time zone")
        return pc.strftime(shown, STAMP_FORMAT), seconds
    own_offsets = not mapped or "%z" in clock["time_format"] or \
        clock["time_format"].upper() == "ISO8601"
    if own_offsets:
        return pc.strftime(shown, _OFFSET_FORMAT), seconds + "%z"
    _refuse_other_clock(column, name, source, clock)
    return pc.strftime(shown, STAMP_FORMAT), seconds


def _refuse_other_clock(column: pa.Array, name: str, source: str, clock) -> None:
    """Refuse stamps whose time zone's offsets differ from the config's clock."""
    stamps = pd.Series(column.to_pandas()).dropna()
    if stamps.empty or clock["utc_offset"] is None and clock["time_zone"] is None:
        return
    zone = clock["time_zone"] or timezone(timedelta(hours=clock["utc_offset"]))
    utc = stamps.dt.tz_convert("UTC").dt.tz_localize(None)
    own = stamps.dt.tz_localize(None) - utc
    config = stamps.dt.tz_convert(zone).dt.tz_localize(None) - utc
    differ = np.flatnonzero((own != config).to_numpy())
    if not len(differ):
        return
    at = int(differ[0])
    setting = (f"[input] time_zone = {clock['time_zone']!r}" if clock["time_zone"]
               else f"[site] utc_offset = {clock['utc_offset']:g}")
    raise TimestampError(
        f"input file {source!r}: its stamps {name!r} carry the time zone "
        f"{column.type.tz} (UTC{_offset(own.iloc[at])} at record {stamps.index[at] + 1}), "
        f"but {setting} reads them as UTC{_offset(config.iloc[at])} there: two clocks for "
        "one stamp; put %z in [input] time_format to read each stamp by its own offset "
        "(converted to local standard time), or correct the setting")


def _offset(delta: pd.Timedelta) -> str:
    minutes = int(delta.total_seconds() // 60)
    sign = "-" if minutes < 0 else "+"
    return f"{sign}{abs(minutes) // 60:02d}:{abs(minutes) % 60:02d}"


# --------------------------------------------------------------------------- JSON
def _json_columns(text: str, source: str, kind: str, wanted) -> dict:
    """Column name -> text cells of JSON records, keys in the order first met."""
    if kind == "a JSON array":
        try:
            records = json.loads(text)
        except ValueError as error:
            raise InputFileError(f"input file {source!r} opens as a JSON array but is not "
                                 f"valid JSON ({error}); write it again") from None
        numbered = list(enumerate(records if isinstance(records, list) else [records], 1))
    else:
        numbered = []
        for number, line in enumerate(text.splitlines(), 1):
            if not line.strip():
                continue
            try:
                numbered.append((len(numbered) + 1, json.loads(line)))
            except ValueError as error:
                raise InputFileError(f"input file {source!r} (JSON Lines): line {number} "
                                     f"is not valid JSON ({error}); correct or remove it "
                                     "in a copy") from None
    cells: dict = {}
    for number, record in numbered:
        if not isinstance(record, dict):
            raise InputFileError(f"input file {source!r} ({kind}): record {number} is "
                                 f"{type(record).__name__} {str(record)[:40]!r}, not an "
                                 "object of named values; each record must be one object")
        for key, value in record.items():
            column = cells.setdefault(key, {})
            if isinstance(value, (dict, list)):
                if key in wanted:
                    raise InputFileError(
                        f"input file {source!r} ({kind}): record {number} holds a nested "
                        f"{type(value).__name__} under {key!r}, not one number or text; "
                        "write one value a record in a copy")
                continue
            column[number] = _json_cell(value)
    size = len(numbered)
    return {key: [by_number.get(number) for number in range(1, size + 1)]
            for key, by_number in cells.items()}


def _json_cell(value) -> str | None:
    """A JSON value as the text that reads back as it (floats: the shortest repr)."""
    if value is None:
        return None
    if isinstance(value, bool):
        return "1" if value else "0"
    if isinstance(value, float):
        return repr(value)
    return str(value)
