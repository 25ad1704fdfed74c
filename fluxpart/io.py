"""Read and validate a site's input: the site TOML and its files of tower records.

The reader turns one or more delimited text files of half-hourly or hourly records
into the canonical frame of :mod:`fluxpart.variables`: canonical column names,
canonical units, float64 values with missing data as NaN, and a tz-naive
:class:`~pandas.DatetimeIndex` named ``"time"`` of interval *start* stamps in local
standard time with a regular 30- or 60-minute frequency. Everything it finds out
on the way (files and encodings read, stamps converted, duplicate rows dropped or
merged, stamps inserted, flags applied, storage added, derived variables,
out-of-range and non-finite counts, suspected unit mix-ups) goes into a
:class:`ReadReport`.

Layouts a logger or a network export produces are read as they are (DESIGN.md
§4.1 "Input layouts"): several files or a glob, split date and time columns, lines
before the header and between header and data (a units line), a decimal comma,
other delimiters and encodings, stamps carrying a UTC offset, civil time with
daylight saving, hour ``24:00``, exact duplicate rows, a site flag whose accepted
values are listed, a CO2 storage term and PPFD instead of global radiation. Stamp
handling lives in :mod:`fluxpart.timestamps` (with :mod:`fluxpart.stamp_hints`,
:mod:`fluxpart.time_zones` and :mod:`fluxpart.stamp_sequence`), unit checks in
:mod:`fluxpart.unit_checks`.

Every problem with the config or the files raises a subclass of
:class:`~fluxpart.errors.FluxpartError` whose one-line message names the setting,
column, file or line at fault and a fix. The input files are only read, never
written.
"""

from __future__ import annotations

import bz2
import codecs
import csv
import difflib
import errno
import fnmatch
import glob
import gzip
import hashlib
import io as _io
import lzma
import math
import os
import re
import unicodedata
from dataclasses import dataclass, field, fields
from pathlib import Path

import numpy as np
import pandas as pd

from . import (
    bracket_names,
    day_counts,
    day_summaries,
    digit_grouping,
    flux_rate_labels,
    footers,
    formula_cells,
    fortran_numbers,
    header_cells,
    interleaved_lines,
    later_files,
    merged_dates,
    page_breaks,
    program_parts,
    record_order,
    resaved_dates,
    row_units,
    table_formats,
    unicode_names,
    zero_runs,
)
from ._validate import (
    is_tar,
    joined_tar_tables,
    joined_zip_tables,
    leading_lines,
    markup_message,
    odd_entry,
    other_system_path_hint,
    owner_file_message,
    printable_line,
    read_site_config_toml,
    refuse_binary,
    single_tar_member,
    single_zip_member,
    tar_files,
    tar_series_break,
    unicode_form_hint,
    universal_head,
)
from .civil_splits import second_pass_head
from .code_values import JUDGED_MAGNITUDE, NIGHT_POTENTIAL, ordinary_code_message
from .comma_fields import (
    field_count,
    split_decimal_comma,
    unquoted_decimal_commas,
    unquoted_fraction_commas,
)
from .config import Config, refuse_misplaced_processing, setting_text, suggest_key
from .double_byte_text import double_byte_readings
from .errors import (
    ConfigError,
    DuplicateTimestampError,
    FluxpartError,
    ImplausibleValueError,
    InputFileError,
    InputTooLarge,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
    TimestampError,
    UnitError,
    read_fault_remedy,
)
from .file_digest import sha256_of_file
from .fixed_width import cut_names_message, delimited, fused_header_names, run_together_field
from .flag_counter import many_values_text
from .flag_grades import middle_grade_warning
from .flag_reach import keeps_every_value
from .flag_words import accept_codes as flag_accept_codes
from .flag_words import are_words as flag_are_words
from .flag_words import coded as flag_word_codes
from .flag_words import counts_note as flag_counts_note
from .flag_words import finite_number
from .flag_words import is_number as flag_is_number
from .flag_words import shown as flag_shown
from .joined_clocks import span_shift_minutes
from .key_hints import table_meaning_hint
from .nee_limits import WRITTEN_WORDS as _WRITTEN_WORDS
from .nee_limits import cut_before_storage
from .overlong_values import refuse_overlong_value
from .plain_numbers import plain_floats
from .quoted_lines import (
    line_opening_quote,
    line_swallowing_records,
    single_quoted,
    wrapped_lines_message,
)
from .reader_notes import ReaderNote, notes_of, warnings_of
from .shifted_fields import shifted_records
from .site import Site
from .split_factor import UNIT_FIT, change_point, unit_of_factor
from .stamp_places import (
    half_interval_message,
    name_conflict_message,
    paired_stamps_message,
    parse_like,
    text_conflict_message,
    zone_column_message,
)
from .stamp_sequence import (
    INTERVALS_MINUTES,
    check_isolated_stretch,
    check_order,
    clock_alignment_warning,
    infer_interval,
    inserted_runs,
    interval_change_warning,
    written_newest_first,
)
from .time_zones import check_time_zone
from .timestamps import join_time_columns, offsets_in_stamps, parse_stamps
from .unit_checks import (
    _FLAG_REFUSE,
    IMPLAUSIBLE_SHARE,
    apart_from_readings,
    implausible_message,
    missing_code_hint,
    mixup_messages,
    most_repeated,
    undeclared_code,
    undeclared_code_cells,
)
from .unit_labels import relabelled_files, relabelled_months_message, relabelled_range_clause
from .variables import (
    PPFD_PER_RG,
    READER_VARIABLES,
    REQUIRED,
    VARIABLES,
    same_unit_key,
    to_canonical,
    unit_spelling,
    units_for,
    vpd_from_rh,
)

__all__ = [
    "ABSURD_MAGNITUDE",
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

#: Where a file's stamp sits in its averaging interval.
TIME_MARKS = ("start", "middle", "end")

#: Numbers of this magnitude or more (and infinities) are read as missing and counted:
#: no tower variable comes near it in any unit, while loggers and exports write such
#: numbers (1e38, the largest float 1.8e308) for "no value" (our choice).
ABSURD_MAGNITUDE = 1e15

_DEFAULT_MISSING = (-9999,)
_DEFAULT_FLAG_ACCEPT = (0,)
_TOP_LEVEL_KEYS = ("input", "processing", "site")
_SITE_KEYS = ("canopy", "latitude", "longitude", "name", "utc_offset")
_SITE_REQUIRED = ("name", "latitude", "longitude", "utc_offset")
_INPUT_KEYS = ("accept_units", "column_widths", "columns", "decimal", "delimiter", "encoding",
               "flag_accept", "other_names",
               "interval_minutes", "missing", "missing_by_variable", "note_mark", "path",
               "rows_after_header",
               "rows_before_header", "time_column", "time_format", "time_marks", "time_zone",
               "units")
_INPUT_REQUIRED = ("path", "time_column", "time_format", "time_marks", "columns")
_FLOAT_SPELLINGS_OF_NAN = ("nan", "+nan", "-nan")
#: NaN and infinity as the Microsoft C runtime's printf wrote them before Visual Studio
#: 2015 ("1.#QNAN", "-1.#IND", "1.#INF", with the precision's zeros: "-1.#IND00"), as
#: loggers' PC software and old Windows programs still export them (Microsoft C runtime
#: documentation of printf's infinity and NaN output (m)): no value, like "nan" and "inf"
_MSVC_NAN = r"[+-]?1\.#(?:ind|qnan|snan)0*"
_MSVC_INFINITY = r"[+-]?1\.#inf0*"
#: NaN as C's printf writes it with its implementation's characters in brackets,
#: "[-]nan(n-char-sequence)" (ISO/IEC 9899:2011 7.21.6.1; strtod reads "NAN(...)" back,
#: 7.22.1.3 (m)): "-nan(ind)" and "nan(snan)" of the Microsoft C runtime since Visual
#: Studio 2015 (Microsoft printf documentation (m)); no value, like "nan"
_C_NAN = r"[+-]?nan\([0-9a-z_]*\)"
_WHITESPACE = "whitespace"
#: What opens a comment line: "#" (shell, Python, R), "//" and "/*" (C, C++, Java), "%"
#: (MATLAB, Octave), "!" (Fortran 90), ";" (INI files, assembler) (each language's
#: reference (m)); no record of a delimited table starts with one of them
_COMMENT_MARKS = interleaved_lines.COMMENT_MARKS
_GLOB_CHARACTERS = set("*?[")
#: A number written with digit grouping (thousands separators) for each decimal mark:
#: "1.034,5" or "1.034" where the decimal mark is a comma, "1,034.5" or "1,034" where it
#: is a point. A leading 0 is never grouped ("0.125" is a decimal point in a mixed file).
_DIGIT_GROUPING = {",": re.compile(r"[+-]?[1-9]\d{0,2}(?:\.\d{3})+(?:,\d*)?"),
                   ".": re.compile(r"[+-]?[1-9]\d{0,2}(?:,\d{3})+(?:\.\d*)?")}
#: Digit grouping by a character that is never a decimal mark: an apostrophe (Swiss
#: spreadsheets), a right single quote, or a space (plain, no-break, narrow no-break, thin).
#: A header cell that is a number (point or comma decimal): the line is a record, not names.
_NUMBER_NAME = re.compile(r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?")
_OTHER_GROUPING = re.compile(r"[+-]?[1-9]\d{0,2}(?:['\u2019 \u00a0\u202f\u2009]\d{3})+(?:[.,]\d*)?")
#: A number followed by a unit written in the cell ("12.3 W/m2", "94 %", "-7.5 °C"), as
#: some loggers' "value with unit" output and spreadsheets' custom number formats saved as
#: text write it (common practice): the tail starts with a letter, "%", "°", "µ" or "‰"
#: and holds no digit before its first such character (so "1.5D+02" and "nan(ind)" are
#: not taken for one; they are judged before this).
_NUMBER_WITH_UNIT = re.compile(
    r"([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([A-Za-z%\u00b0\u00b5\u03bc\u2030].*)")
#: A number with a mark after it ("0.43*", "1.2?", "5.1!!"), as a logger or an editor marks
#: a suspect, edited or estimated value (common practice), and two numbers in one cell
#: joined by "|", "/" or "_" ("0.329|0": a value and its quality flag).
_MARKED_NUMBER = re.compile(r"([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([*?!#~^]+)")
#: A number followed by a comment: a comment mark ("#", "//", ";", "!") and words after it
#: ("11.74 # sensor cleaned"), as a logger program's or an editor's note at the end of a
#: line is written (common practice); the words hold a letter.
_COMMENTED_NUMBER = re.compile(
    r"([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?)\s*((?:#|//|;|!)\s*\S*[A-Za-z].*)")
_TWO_NUMBERS = re.compile(
    r"([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([|/_])\s*"
    r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?")


@dataclass(frozen=True)
class ReadReport:
    """What the reader found and did; printed by ``fluxpart check``.

    Attributes
    ----------
    source : str
        Path of the file read (several joined by ``", "``).
    interval_minutes : int
        Record interval [minutes], 30 or 60.
    time_marks : str
        Where the file's stamps sit in their interval: ``"start"``, ``"middle"`` or ``"end"``.
    shift_minutes : float
        Shift subtracted from the file's stamps to get interval starts [minutes].
    records_read : int
        Data rows read from the files (blank lines not counted).
    records : int
        Rows of the canonical frame (records kept plus stamps inserted).
    first_start, last_start : pandas.Timestamp or None
        First and last interval start of the frame.
    stamps_inserted : int
        Stamps missing from the files and inserted as all-NaN rows.
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
        Canonical variables computed rather than read (``vpd`` from ``rh`` and
        ``tair``, ``rg`` from ``ppfd``).
    missing_cells : dict
        Canonical name -> cells that were empty or a missing code.
    outside_range : dict
        Canonical name -> present values outside the plausible range (left for screening).
    warnings : tuple of str
        Problems found that did not stop the reader.
    files : tuple of str
        Every file read, in the order given.
    encodings : tuple of str
        Text encoding each file was read with.
    duplicate_rows : int
        Rows dropped because an identical row (same stamp, same value in every
        column read) came earlier in the same file.
    merged_rows : int
        Rows dropped because an identical row came in another file (overlapping files),
        or a row of the same stamp that it completes (cells missing in one file taken
        from the other; every other cell equal; named in ``warnings``).
    stamp_conversions : dict
        What was done to stamps: ``hour_24`` (read as midnight of the next day),
        ``utc_offset`` (converted from stamps carrying an offset), ``daylight_saving``
        (moved from civil to standard time), ``time_zone`` (the zone, if any);
        ``rounded_to_minute``, ``date_only`` (midnight written as the date alone),
        ``whole_numbers`` (fields written "2021.0" read without the point; layouts38),
        ``decimal_fields`` (a decimal hour or day of the year read as a clock; layouts40) and
        ``utc_zone`` (stamps of a UTC zone moved to the site's offset) only where they
        happened.
    nonfinite_cells : dict
        Canonical name -> cells holding an infinity or a number of magnitude
        :data:`ABSURD_MAGNITUDE` or more, read as missing.
    flag_accept : tuple
        Site-flag values that keep a record.
    flag_rejected : int
        Records the site's flag(s) reject.
    flag_rejected_with_nee : int or None
        Of those, the records that hold an NEE value (the others lack one anyway, and
        screening counts them as ``missing``); shown by ``fluxpart check``, not part of
        :meth:`to_dict` (the manifest's reader record is unchanged). None: not counted.
    storage_missing : int
        Records with a turbulent flux but no storage term, whose NEE was set missing.
    accepted_units : tuple of str
        Variables listed in ``[input] accept_units`` whose unit checks only warned.
    unit_refusals : tuple of str
        Unit or plausibility problems that stop ``run``, when read with
        ``unit_problems="report"`` (as ``fluxpart check`` does); also in `warnings`.
    header_trailing_delimiter : int
        Files whose header line ends with a delimiter (an empty last name) that their
        data lines lack; the empty name was ignored.
    absent_columns : dict
        Canonical name -> ``(column, files, records)`` for an optional mapped column
        that some of several files lack: those files and the records read as missing
        for that reason.
    renamed_columns : dict
        Other name -> ``(mapped name, files)``: a column read under its mapped name in
        that many files that write it by another name of ``[input.other_names]``.
    notes : tuple of str
        How the layout was understood where every value is read as the file means it
        (blank lines above the header read past, a footer dropped; not in `warnings`, and
        no problem for ``fluxpart check``; :mod:`fluxpart.reader_notes`). In the
        manifest's reader record only where there are some.
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
    files: tuple = ()
    encodings: tuple = ()
    duplicate_rows: int = 0
    merged_rows: int = 0
    stamp_conversions: dict = field(default_factory=dict)
    nonfinite_cells: dict = field(default_factory=dict)
    flag_accept: tuple = _DEFAULT_FLAG_ACCEPT
    flag_rejected: int = 0
    flag_rejected_with_nee: int | None = None
    storage_missing: int = 0
    accepted_units: tuple = ()
    unit_refusals: tuple = ()
    header_trailing_delimiter: int = 0
    absent_columns: dict = field(default_factory=dict)
    renamed_columns: dict = field(default_factory=dict)
    notes: tuple = ()

    def __str__(self) -> str:
        files = self.files or (self.source,)
        # a line break or control character in a file's name is shown escaped, so that
        # each file stays on its own line (faults28 left a raw newline here)
        lines = [f"source            {printable_line(str(files[0]))}"]
        lines.extend(f"                  {printable_line(str(name))}" for name in files[1:])
        if self.encodings and set(self.encodings) != {"utf-8"}:
            lines.append("encoding          " + ", ".join(sorted(set(self.encodings))))
        lines += [
            f"interval          {self.interval_minutes} min",
            # start stamps are not shifted: "shifted by -0 min" read as a shift (review36)
            f"time marks        {self.time_marks} "
            + (f"(stamps shifted by -{self.shift_minutes:g} min to interval starts)"
               if self.shift_minutes else "(stamps are interval starts, not shifted)"),
        ]
        conversions = _conversion_text(self.stamp_conversions)
        if conversions:
            lines.append(f"stamps converted  {conversions}")
        lines += [
            f"period            {_stamp(self.first_start)} .. {_stamp(self.last_start)} "
            "(interval starts)",
            f"records read      {self.records_read}",
        ]
        if self.header_trailing_delimiter:
            lines.append(f"header            ends with a delimiter the data lines lack (an empty "
                         f"last name) in {self.header_trailing_delimiter} of {len(files)} "
                         "file(s): the empty name was ignored")
        for other, (name, count) in self.renamed_columns.items():
            lines.append(f"column renamed    {other!r} read as {name!r} in {count} of "
                         f"{len(files)} file(s) ([input.other_names])")
        if self.duplicate_rows or self.merged_rows:
            lines.append(f"rows dropped      {self.duplicate_rows} exact duplicate(s) within a "
                         f"file, {self.merged_rows} identical in overlapping files")
        lines += [
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
        for name, (column, lacking, records) in self.absent_columns.items():
            lines.append(f"not in every file {name} <- {column}: absent from "
                         f"{_file_list(list(lacking))}, {records} record(s) read as missing")
        lines.append("missing codes     " + (", ".join(repr(c) for c in self.missing_codes)
                                             or "none"))
        nonfinite = {k: v for k, v in self.nonfinite_cells.items() if v}
        if nonfinite:
            lines.append("non-finite        " + ", ".join(f"{k}: {v}" for k, v in nonfinite.items())
                         + " (read as missing)")
        if "nee_flag" in self.columns:
            with_nee = self.flag_rejected_with_nee
            lines.append(f"site flag         keeps values {list(self.flag_accept)}; "
                         f"{self.flag_rejected} record(s) rejected"
                         + (f", {with_nee} of them with an NEE value (the others have "
                            "none; screening counts those as missing)"
                            if with_nee is not None and with_nee != self.flag_rejected
                            else ""))
        if self.storage_missing:
            lines.append(f"storage           missing for {self.storage_missing} record(s) with "
                         "a flux: their NEE is missing")
        if self.accepted_units:
            lines.append("accept_units      " + ", ".join(self.accepted_units)
                         + " (unit checks only warn)")
        lines.append("derived           " + (", ".join(self.derived) or "none"))
        outside = {k: v for k, v in self.outside_range.items() if v}
        lines.append("outside range     " + (", ".join(f"{k}: {v}" for k, v in outside.items())
                                             or "none"))
        return "\n".join(lines)

    def to_dict(self) -> dict:
        """The report as plain JSON-ready values (for the manifest's provenance)."""
        return {
            # no file names or paths in the counts: provenance.input records them, and a
            # rerun from a moved copy must give the same reader record; the manifest
            # writes a path its warnings and notes quote relative to the result folder
            # (manifest.portable_messages)
            "files": len(self.files or (self.source,)),
            "encodings": list(self.encodings),
            "records_read": self.records_read, "records": self.records,
            "interval_minutes": self.interval_minutes,
            "time_marks": self.time_marks, "shift_minutes": self.shift_minutes,
            "stamp_conversions": dict(self.stamp_conversions),
            "duplicate_rows": self.duplicate_rows, "merged_rows": self.merged_rows,
            "stamps_inserted": self.stamps_inserted,
            "columns": dict(self.columns), "units": dict(self.units),
            "missing_cells": dict(self.missing_cells),
            "nonfinite_cells": dict(self.nonfinite_cells),
            "flag_accept": list(self.flag_accept), "flag_rejected": self.flag_rejected,
            "storage_missing": self.storage_missing,
            "accepted_units": list(self.accepted_units),
            "unit_refusals": list(self.unit_refusals),
            "derived": list(self.derived), "warnings": list(self.warnings),
            # only where it happened: earlier manifests have no such key
            **({"header_trailing_delimiter": self.header_trailing_delimiter}
               if self.header_trailing_delimiter else {}),
            **({"renamed_columns": {other: [name, count] for other, (name, count)
                                    in self.renamed_columns.items()}}
               if self.renamed_columns else {}),
            # records read as missing per variable because their file lacks its column
            **({"absent_column_records": {name: records for name, (_, _, records)
                                          in self.absent_columns.items()}}
               if self.absent_columns else {}),
            **({"notes": list(self.notes)} if self.notes else {}),
        }


@dataclass(frozen=True)
class SiteConfig:
    """A parsed and validated site TOML (its ``[site]`` and ``[input]`` tables).

    Attributes
    ----------
    site : Site
        The measurement site.
    config_path : pathlib.Path
        The TOML file.
    input_paths : tuple of pathlib.Path
        The record files, resolved relative to the TOML file (a glob expanded and
        sorted by name).
    columns : dict
        Canonical name -> file column, as written in ``[input.columns]``
        (``nee_flag`` may name a list of columns).
    units : dict
        Canonical name -> file unit, as written in ``[input.units]``.
    time_column : str or tuple of str
        Column(s) holding the stamps; several are joined with one space.
    time_format, time_marks : str
        Time settings of ``[input]``.
    missing : tuple
        Missing-value codes, numbers or strings.
    delimiter : str
        Field delimiter of the file (``"whitespace"`` for runs of blanks).
    interval_minutes : int or None
        Record interval [minutes], or ``None`` to infer it.
    document : dict
        The whole TOML document as read (``[processing]`` is for
        :meth:`fluxpart.Config.from_toml`).
    decimal : str
        Decimal mark, ``"."`` or ``","``.
    encoding : str or None
        Text encoding, or ``None`` to detect it (byte-order marks, UTF-16, UTF-8).
    rows_before_header, rows_after_header : int
        Lines skipped before the header and between header and data.
    time_zone : str or None
        Zone whose civil time (with daylight saving) the stamps are in.
    flag_accept : tuple of float
        Site-flag values that keep a record.
    accept_units : tuple of str
        Variables whose unit checks only warn.
    missing_by_variable : dict
        Canonical name -> codes meaning "no value" in that variable's column only, beside
        `missing` (``[input.missing_by_variable]``).
    column_widths : tuple of int
        Characters of each column of a fixed-width file (``[input] column_widths``), or
        () for a delimited one.
    note_mark : str or None
        What opens the note lines written among the records (``[input] note_mark``), or
        None to find a comment mark the file's notes share (round layouts37).
    """

    site: Site
    config_path: Path
    input_paths: tuple
    columns: dict
    units: dict
    time_column: str | tuple
    time_format: str
    time_marks: str
    missing: tuple
    delimiter: str
    interval_minutes: int | None
    document: dict
    decimal: str = "."
    encoding: str | None = None
    rows_before_header: int = 0
    rows_after_header: int = 0
    time_zone: str | None = None
    flag_accept: tuple = _DEFAULT_FLAG_ACCEPT
    accept_units: tuple = ()
    missing_by_variable: dict = field(default_factory=dict)
    column_widths: tuple = ()
    other_names: dict = field(default_factory=dict)
    note_mark: str | None = None

    @property
    def input_path(self) -> Path:
        """The record file when there is one; the first of several otherwise."""
        return self.input_paths[0]

    def input_sha256(self) -> str:
        """SHA-256 of the input: of the file itself, or of the list of files and hashes.

        For one file it is the file's own SHA-256. For several it is the SHA-256 of
        the text ``"<name>\\t<sha256>\\n"`` per file in the order read, so that a
        changed, added, removed or renamed file changes it.
        """
        hashes = [_file_sha256(path) for path in self.input_paths]
        if len(hashes) == 1:
            return hashes[0]
        text = "".join(f"{path.name}\t{digest}\n"
                       for path, digest in zip(self.input_paths, hashes, strict=True))
        return hashlib.sha256(text.encode("utf-8")).hexdigest()

    def input_record(self) -> dict:
        """The input's provenance: ``path`` (absolute; the first file of several),
        ``sha256`` (:meth:`input_sha256`) and, for several files, ``files``: the path
        and SHA-256 of each."""
        record = {"path": str(Path(self.input_path).resolve()), "sha256": self.input_sha256()}
        if len(self.input_paths) > 1:
            record["files"] = [{"path": str(Path(path).resolve()), "sha256": _file_sha256(path)}
                               for path in self.input_paths]
        return record

    def read(self, *, unit_problems: str = "refuse") -> tuple[pd.DataFrame, ReadReport]:
        """Read the site's records: ``(frame, report)`` as from :func:`read_table`.

        ``unit_problems="report"`` lists a unit mix-up in the report instead of
        raising (``fluxpart check``); the default refuses it (``fluxpart run``).
        """
        try:
            return read_table(list(self.input_paths), **self.table_arguments(),
                              unit_problems=unit_problems)
        except InputTooLarge:
            raise
        except MemoryError:
            raise InputTooLarge(too_large_to_read(self.input_paths)) from None

    def table_arguments(self) -> dict:
        """Return the keyword arguments of :func:`read_table` for this site."""
        return {"columns": dict(self.columns), "units": dict(self.units),
                "time_column": self.time_column, "time_format": self.time_format,
                "time_marks": self.time_marks, "missing": self.missing,
                "delimiter": self.delimiter, "interval_minutes": self.interval_minutes,
                "decimal": self.decimal, "encoding": self.encoding,
                "rows_before_header": self.rows_before_header,
                "rows_after_header": self.rows_after_header, "time_zone": self.time_zone,
                "flag_accept": self.flag_accept, "accept_units": self.accept_units,
                "site": self.site} | ({"missing_by_variable": dict(self.missing_by_variable)}
                                      if self.missing_by_variable else {}) | (
            {"column_widths": self.column_widths} if self.column_widths else {}) | (
            {"other_names": dict(self.other_names)} if self.other_names else {}) | (
            {"note_mark": self.note_mark} if self.note_mark else {})


def read_config(path) -> tuple[pd.DataFrame, Site]:
    """Read a site TOML and the records it points to.

    Parameters
    ----------
    path : str or path-like
        The site config (TOML; its tables ``[site]``, ``[input]``, ``[input.columns]``,
        ``[input.units]`` and ``[processing]`` as the README's "Your own site" and the
        page it links, docs/logger-files.md, give them); its ``[input] path`` is relative to the
        folder of the file as named.

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
    """Read the records of a parsed site config: ``(frame, report)``."""
    return site_config.read()


def read_site_config(path, input_paths=None) -> SiteConfig:
    """Parse and validate the ``[site]`` and ``[input]`` tables of a site TOML.

    Parameters
    ----------
    path : str or path-like
        The site config file.
    input_paths : sequence of path-like, optional
        The input files, replacing those that ``[input] path`` names or matches
        (``fluxpart verify`` with moved inputs, or a config rebuilt from the copy in a
        manifest, whose glob would match nothing beside the copy).

    Returns
    -------
    SiteConfig

    Raises
    ------
    InputFileError
        If the TOML file does not exist or cannot be read.
    ConfigError
        If the TOML is invalid, a table or key is unknown (the nearest valid key is
        suggested), a required key is missing, a value has the wrong type or range,
        or ``path`` names or matches no file.
    UnitError
        If ``[input.units]`` names a unit unknown for its variable.

    Notes
    -----
    ``[site] utc_offset`` and ``[input] time_marks`` are required although
    :class:`Site` and :func:`read_table` have defaults: in a site file a forgotten
    offset or stamp position would silently shift day and night by hours.
    """
    path = Path(path)
    document = read_site_config_toml(path)

    _check_keys(document, _TOP_LEVEL_KEYS, "site config: top-level table", "[{key}]")
    for table in ("site", "input"):
        if table not in document:
            raise ConfigError(f"site config {str(path)!r} has no [{table}] table")
        if not isinstance(document[table], dict):
            raise ConfigError(f"[{table}] must be a table, found {document[table]!r}")
    site_table, input_table = document["site"], document["input"]
    _check_keys(site_table, _SITE_KEYS, "[site]", "{key}")
    _check_keys(input_table, _INPUT_KEYS, "[input]", "{key}")
    # a required key written under [processing] is named there, not as missing
    refuse_misplaced_processing(document.get("processing", {}))
    for key in _SITE_REQUIRED:
        if key not in site_table:
            raise ConfigError(f"[site] {key} is missing; " + _SITE_HELP[key])
    for key in _INPUT_REQUIRED:
        if key not in input_table:
            raise ConfigError(f"[input] {key} is missing; " + _INPUT_HELP[key])
    site = Site(name=site_table["name"], latitude=site_table["latitude"],
                longitude=site_table["longitude"], utc_offset=site_table["utc_offset"],
                canopy=site_table.get("canopy", "tall"))

    if input_paths is None:
        input_paths = _resolve_paths(input_table["path"], path.parent)
        _beside_link_target(path, input_paths)
    else:
        input_paths = tuple(Path(p) for p in input_paths)
    time_column = _check_time_column(input_table["time_column"])
    if not isinstance(input_table["time_format"], str) or not input_table["time_format"]:
        raise ConfigError(f"[input] time_format = {setting_text(input_table['time_format'])}: expected a "
                          "non-empty string such as \"%Y-%m-%d %H:%M\"")
    columns = _string_table(input_table["columns"], "[input.columns]")
    units = _unit_spellings(_string_table(input_table.get("units", {}), "[input.units]"))
    _check_mapping(columns, units)
    time_zone = input_table.get("time_zone")
    if time_zone is not None:
        check_time_zone(time_zone, site.utc_offset)
    delimiter = _check_delimiter(input_table.get("delimiter", ","))
    column_widths = _check_column_widths(input_table.get("column_widths"),
                                         input_table.get("delimiter"))
    return SiteConfig(
        site=site,
        config_path=path,
        input_paths=input_paths,
        columns=columns,
        units=units,
        time_column=time_column,
        time_format=input_table["time_format"],
        time_marks=_check_time_marks(input_table["time_marks"]),
        missing=_check_missing(input_table.get("missing", list(_DEFAULT_MISSING))),
        delimiter=delimiter,
        interval_minutes=_check_interval(input_table.get("interval_minutes")),
        document=document,
        decimal=_check_decimal(input_table.get("decimal", "."), delimiter),
        encoding=_check_encoding(input_table.get("encoding")),
        rows_before_header=_check_rows(input_table.get("rows_before_header", 0),
                                       "rows_before_header"),
        rows_after_header=_check_rows(input_table.get("rows_after_header", 0),
                                      "rows_after_header"),
        time_zone=time_zone,
        flag_accept=_check_flag_accept(input_table.get("flag_accept",
                                                       list(_DEFAULT_FLAG_ACCEPT))),
        accept_units=_check_accept_units(input_table.get("accept_units", [])),
        missing_by_variable=_check_missing_by_variable(
            input_table.get("missing_by_variable", {}), columns),
        column_widths=column_widths,
        other_names=_check_other_names(input_table.get("other_names", {}), columns,
                                       time_column),
        note_mark=_check_note_mark(input_table.get("note_mark")),
    )


def read_table(path, *, columns, units=None, time_column, time_format, time_marks="start",
               missing=_DEFAULT_MISSING, delimiter=",", interval_minutes=None, decimal=".",
               encoding=None, rows_before_header=0, rows_after_header=0, time_zone=None,
               flag_accept=_DEFAULT_FLAG_ACCEPT, accept_units=(), site=None,
               unit_problems="refuse", missing_by_variable=None, column_widths=None,
               other_names=None, note_mark=None):
    """Read delimited or fixed-width files of tower records into the canonical frame.

    Parameters
    ----------
    path : str, path-like or list of them
        The file, or several files read as one record in time order.
    columns : dict
        Canonical name -> column name in the file. A canonical variable not in the
        mapping is read from a file column of its own canonical name if there is
        one. ``nee_flag`` may map a list of flag columns. ``storage`` (CO2 storage
        flux) and ``ppfd`` may be mapped too (see Notes).
    units : dict, optional
        Canonical name -> unit of the file's column, where it is not the canonical
        unit (spellings: :func:`fluxpart.variables.units_for`).
    time_column : str or list of str
        Column(s) holding the stamps; several are joined with one space before
        `time_format` applies (a date column and a time column).
    time_format : str
        :func:`datetime.datetime.strptime` format of the stamps (or ``"ISO8601"``);
        ``%z`` reads a UTC offset.
    time_marks : {"start", "middle", "end"}
        Where each stamp sits in its averaging interval.
    missing : sequence of float or str
        Codes meaning "no value". Numbers match within 1e-6 relative; strings match
        whole cells, ignoring case and surrounding blanks. Empty cells and ``NaN``
        are always missing; infinities and numbers of magnitude
        :data:`ABSURD_MAGNITUDE` or more are read as missing and counted.
    delimiter : str
        Field delimiter, one character, or ``"whitespace"`` for runs of blanks.
    column_widths : sequence of int, optional
        Characters of each column of a fixed-width file, left to right (instead of a
        `delimiter`): every line below ``rows_before_header`` is cut at these widths
        and its fields stripped of blanks; a field of blanks is an empty cell.
    note_mark : str, optional
        What opens a note line among the records (``"#"``, ``";"``, ``"REM"``): every
        line after the header's that opens with it (blanks before it aside) is skipped
        and named. Without it, a comment mark that every note of the file shares and no
        record starts with is found (:mod:`fluxpart.interleaved_lines`).
    interval_minutes : {30, 60}, optional
        Record interval [minutes]; inferred from the most common spacing if omitted.
    decimal : {".", ","}
        Decimal mark of the numbers.
    encoding : str, optional
        Text encoding (e.g. ``"latin-1"``, ``"utf-16"``); by default a byte-order
        mark or the byte pattern of UTF-16 decides, else UTF-8.
    rows_before_header, rows_after_header : int
        Lines skipped before the header line and between it and the data (a units
        line).
    time_zone : str, optional
        IANA ``"Area/City"`` zone: the stamps are civil time with daylight saving
        and are converted to local standard time (needs `site`).
    flag_accept : sequence of float
        Values of the site flag(s) that keep a record (default ``[0]``).
    accept_units : sequence of str
        Variables whose unit and plausibility checks only warn instead of refusing
        the file (when the user knows the values are right).
    site : Site, optional
        The site: its ``utc_offset`` converts stamps carrying a UTC offset or civil
        time; its position enables the check of Rg against potential radiation.
    unit_problems : {"refuse", "report"}
        What a unit mix-up or mostly implausible column does: raise
        ImplausibleValueError (default), or go into ``report.unit_refusals`` and
        ``report.warnings`` with the values kept as declared (for a preflight that
        lists every problem).
    missing_by_variable : dict, optional
        Canonical name -> codes meaning "no value" in that variable's column only, beside
        `missing`. A numeric code of `missing` that is an ordinary reading of a column
        (0 in Rg at night, a freezing-point temperature) is refused naming both readings
        (:func:`fluxpart.code_values.ordinary_code_message`); this setting says which
        columns it is meant for.

    Returns
    -------
    frame : pandas.DataFrame
        Columns ``nee`` [µmol m-2 s-1], ``rg`` [W m-2], ``tair`` [°C], ``vpd`` [hPa],
        ``ustar`` [m s-1] and, where read, ``tsoil`` [°C], ``rh`` [%], ``nee_flag``
        [1] (0 = kept by the site's flags, 1 = rejected), all float64 with NaN for
        missing values; index: tz-naive DatetimeIndex named ``"time"`` of interval
        starts with a regular frequency, stamps absent from the files inserted as
        all-NaN rows. ``frame.attrs["accept_units"]`` holds `accept_units` where
        given, so that :func:`fluxpart.process` does not warn again about a unit
        the file was accepted in.
    report : ReadReport
        What was found and done.

    Raises
    ------
    InputFileError
        A file is missing, unreadable (with an encoding hint), empty, has a
        duplicated mapped header or a cell that is not a number.
    ConfigError
        A bad setting.
    MissingColumnError
        A required or mapped column is absent; the message lists the file's columns.
    TimestampError
        A stamp does not parse (file and line named), or a civil stamp does not
        exist in `time_zone`.
    DuplicateTimestampError, NonMonotonicTimestampError
        A stamp repeats with different values (within a file or across files: both
        named with their lines), or stamps go backwards within a file.
    SpacingError
        Spacing is not 30/60 minutes or not a whole multiple of the interval.
    UnitError
        A declared unit is unknown for its variable.
    ImplausibleValueError
        A variable is mostly implausible, or its values give away a unit mix-up
        (see :mod:`fluxpart.unit_checks`); the message says which setting fixes it.

    Notes
    -----
    *Several files* are read one by one (each with the same settings), then joined
    and sorted by time. A row identical (same stamp, same value in every column
    read) to an earlier row of the same file is dropped and counted as a
    duplicate; one identical to a row of another file is dropped and counted as
    merged. Rows with the same stamp but different values are an error naming both
    files and lines.

    *Site flags*: each flag column keeps a record where its value is in
    `flag_accept`; the canonical ``nee_flag`` is 0 where every flag present keeps
    the record, 1 where any rejects it, NaN where none is present.

    *Storage*: the storage flux is added to the turbulent flux mapped as ``nee``.
    A record with a turbulent flux but no storage value gets a missing NEE (and is
    gap-filled): adding storage in some records and not in others would bias the
    night and morning sums, where storage is largest. The count is reported.

    *PPFD*: when ``ppfd`` is mapped and ``rg`` is not, ``rg = ppfd / PPFD_PER_RG``
    (:data:`fluxpart.variables.PPFD_PER_RG`, 2.10 µmol J-1).

    Row numbers in messages are lines of the file (the first line is line 1).
    Interval starts are ``stamp - interval`` for end stamps and ``stamp -
    interval / 2`` for middle stamps.
    """
    paths = _as_paths(path)
    columns, flag_columns = _split_flag_columns(columns)
    columns = _string_table(columns, "[input.columns]")
    units = _unit_spellings(_string_table(dict(units or {}), "[input.units]"))
    _check_mapping(columns, units, flag_columns)
    time_columns = _check_time_column(time_column)
    time_marks = _check_time_marks(time_marks)
    missing = _check_missing(missing)
    delimiter = _check_delimiter(delimiter)
    column_widths = _check_column_widths(column_widths, None if delimiter == "," else delimiter)
    if column_widths:
        delimiter = "\t"                     # the fields cut at the widths, tab-joined
    decimal = _check_decimal(decimal, delimiter)
    encoding = _check_encoding(encoding)
    note_mark = _check_note_mark(note_mark)
    rows_before_header = _check_rows(rows_before_header, "rows_before_header")
    rows_after_header = _check_rows(rows_after_header, "rows_after_header")
    interval_minutes = _check_interval(interval_minutes)
    flag_accept = _check_flag_accept(flag_accept)
    flag_missing, exempted = _flag_missing_codes(missing, flag_accept)
    words = flag_accept if flag_are_words(flag_accept) else None
    word_counts: dict = {}                    # flag value written -> records, all files
    accept_units = _check_accept_units(accept_units)
    missing_by_variable = _check_missing_by_variable(missing_by_variable or {}, columns)
    other_names = _check_other_names(other_names or {}, columns, time_columns)
    if unit_problems not in ("refuse", "report"):
        raise ConfigError(f"unit_problems = {unit_problems!r}: expected 'refuse' or 'report'")
    preflight: list[str] | None = [] if unit_problems == "report" else None
    if not isinstance(time_format, str) or not time_format:
        raise ConfigError(f"[input] time_format = {setting_text(time_format)}: expected a format string "
                          "such as '%Y-%m-%d %H:%M'")
    utc_offset = None if site is None else site.utc_offset
    if time_zone is not None:
        if site is None:
            raise ConfigError("[input] time_zone needs the site (its [site] utc_offset)")
        check_time_zone(time_zone, utc_offset)
    named = name_conflict_message(time_columns, time_marks, time_format, time_zone, utc_offset)
    if named:
        raise ConfigError(named)

    warnings: list[str] = []
    if flag_columns and exempted:
        shown = ", ".join(repr(v) if isinstance(v, str) else f"{v:g}" for v in exempted)
        warnings.append(f"[input] missing lists {shown}, which [input] flag_accept keeps as a "
                        f"good record: {shown} is read as missing in the data columns only, not "
                        f"in the flag column(s) {', '.join(repr(c) for c in flag_columns)}")
    parts, mapping = [], None
    empty = []
    # several files: a missing code no file shows as a reading alone is judged on the
    # cells of them all (review37: daily files of 48 records, each under MIN_CELLS)
    code_cells = {} if len(paths) > 1 else None
    renamed_in: dict = {}                     # (other name, mapped name) -> files
    later_notes: dict = {}                    # later files lacking titles or a header
    queue, deferred = list(paths), set()
    for path_ in queue:
        try:
            read = _read_file(path_, columns=columns, units=units, flag_columns=flag_columns,
                              time_columns=time_columns, time_format=time_format,
                              missing=missing, delimiter=delimiter, decimal=decimal,
                              encoding=encoding, rows_before_header=rows_before_header,
                              rows_after_header=rows_after_header, time_zone=time_zone,
                              utc_offset=utc_offset, warnings=warnings,
                              may_lack=len(paths) > 1, flag_missing=flag_missing,
                              flag_words=words, flag_word_counts=word_counts,
                              time_marks=time_marks, site=site,
                              missing_by_variable=missing_by_variable,
                              code_cells=code_cells, column_widths=column_widths,
                              other_names=other_names, renamed_in=renamed_in,
                              note_mark=note_mark,
                              first_header=(parts[0]["header_line"], parts[0]["under_header"])
                              if parts else None, later_notes=later_notes)
        except _EmptyFileError as error:
            # one of several files without records (a logger file opened at a power cut):
            # it holds nothing to read, so the others are read and it is named
            if len(paths) == 1:
                raise
            empty.append(str(path_))
            warnings.append(f"input file {str(path_)!r} {error.what}: skipped (a logger file "
                            "opened as the power failed?); the other input files were read")
            continue
        except (InputFileError, MissingColumnError) as error:
            # a layout setting that would read this file would misread those read before
            layout = re.search(r"set \[input\] (delimiter|decimal|encoding|rows_before_header|"
                               r"rows_after_header) = ", str(error))
            if (layout is not None and layout.group(1) == "rows_before_header" and not parts
                    and path_ not in deferred
                    and _header_as_set_elsewhere([p for p in paths if p != path_], encoding,
                                                 delimiter, time_columns, rows_before_header)):
                # a title block of another length in the first file(s): read after a file
                # whose header stands as set, as later files are (layouts50)
                deferred.add(path_)
                queue.append(path_)
                continue
            if layout is not None and layout.group(1) == "rows_before_header":
                _refuse_header_lines_differ(paths, encoding, delimiter, time_columns,
                                            rows_before_header)
            if layout is not None and layout.group(1) == "delimiter" and not parts:
                _refuse_delimiters_differ(paths, encoding, delimiter, time_columns)
            if layout is None and isinstance(error, MissingColumnError):
                _refuse_time_column_spelled_otherwise(error, path_, paths, parts, encoding,
                                                      delimiter, time_columns)
            if not parts or layout is None:
                raise
            raise type(error)(f"{error}; but {parts[0]['source']!r} was read with the present "
                              f"{layout.group(1)}: one [input] setting reads every file, so "
                              "give this file the others' layout in a copy") from None
        for part in read:                     # a file's parts (a program change) or itself
            found = (part["mapping"], part["flag_columns"])
            if mapping is not None and found != (mapping, flag_columns):
                raise InputFileError(f"{part['source']!r} maps columns differently from "
                                     f"{parts[0]['source']!r} ({_describe_mapping(*found)} "
                                     f"vs {_describe_mapping(mapping, flag_columns)}); give "
                                     "every file the same columns or map them explicitly in "
                                     "[input.columns]")
            mapping, flag_columns = found
            parts.append(part)
    if not parts:
        raise InputFileError(f"every input file is empty ({len(empty)} files, e.g. "
                             f"{empty[0]!r}); check [input] path")
    _refuse_ordinary_code_of_files(code_cells, parts)
    stored = _storage_corrected_beside(parts, mapping) if "storage" not in mapping else None
    if stored:
        warnings.append(f"storage: {stored}")
    warnings.extend(_later_files_warnings(later_notes, parts[0], rows_before_header,
                                          delimiter))
    header_rows = _header_rows_warning(parts)
    if header_rows:
        warnings.append(header_rows)
    newest = [part["source"] for part in parts if part["newest_first"]]
    if newest:
        warnings.append(ReaderNote(
            (f"input file {newest[0]!r} is" if len(parts) == 1 else
             f"{len(newest)} of {len(parts)} input files ({_file_list(newest)}) are")
            + " written newest first (the stamps go back in time from line to line): read "
            "oldest first"))
    # a unit the file's units row states where [input.units] says none (unitsrow)
    stated, stated_notes, stated_refusals = row_units.stated_units(parts, mapping, units)
    for name, message in stated_refusals.items():
        _refuse_or_warn(name, message, accept_units, warnings, preflight)
    units = {**units, **stated}
    warnings.extend(ReaderNote(note) for note in stated_notes)
    warnings.extend(_labelled_unit_warnings(parts, mapping, units))
    parts, absent, joined = _fill_lacking(parts, mapping, time_columns, warnings)
    if time_zone is not None:
        parts = _second_pass_heads(parts, time_zone, utc_offset, warnings)
    combined = _combine(parts)
    if combined["completed_stamps"] and not joined:      # a join completes every stamp
        warnings.append(f"{combined['completed_stamps']} stamp(s) came from overlapping files "
                        "whose rows complete each other (a cell missing in one where "
                        "another has it, every other cell equal; the first "
                        f"{combined['completed_first']}): each read once, every cell "
                        "from the file that has it")
    if combined["placeholders"]:
        source, line = combined["placeholder_first"]
        warnings.append(ReaderNote(
            f"{combined['placeholders']} record(s) holding no value (every column read "
            "missing, a flag aside) at a stamp that another input file has with values (the "
            f"first on line {line} of {source!r}): a placeholder, dropped; the record's own "
            "flag kept"))

    stamps = combined["stamps"]
    def describe(position):
        return _place(combined, position)

    check_isolated_stretch(pd.DatetimeIndex(stamps), describe)
    interval_minutes = infer_interval(stamps, interval_minutes, describe)
    interval_change = interval_change_warning(pd.DatetimeIndex(stamps), interval_minutes,
                                              describe)
    if interval_change:
        warnings.append(interval_change)
    shift_minutes = {"start": 0.0, "middle": interval_minutes / 2,
                     "end": float(interval_minutes)}[time_marks]
    starts = pd.DatetimeIndex(stamps) - pd.Timedelta(minutes=shift_minutes)
    # stamps converted from another clock to a standard time that is not a whole number
    # of intervals from it (5.75 h from UTC) fall off the grid by right
    converted_clock = time_zone is not None or any(
        part["conversions"]["utc_offset"] or part["conversions"].get("utc_zone")
        for part in parts)
    fractional = utc_offset is not None and round(utc_offset * 60) % interval_minutes != 0
    if not (converted_clock and fractional):
        half = half_interval_message(starts, interval_minutes, time_marks)
        if half:
            raise TimestampError(half)
    alignment = clock_alignment_warning(starts, interval_minutes, time_marks)
    if alignment:
        warnings.append(alignment)

    values = combined["values"]
    converted = {name: to_canonical(values[name], name, units.get(name),
                                    interval_minutes=interval_minutes)
                 for name in mapping}
    # the specific mix-ups first (their message names the fix), then the ranges
    accepted = []
    potential = _potential(starts, site, interval_minutes)
    refusals, suspicions = mixup_messages(converted, units, mapping, interval_minutes, potential,
                                          missing, starts)
    warnings.extend(suspicions)
    written_limit = _written_limit(converted, [refusals.get("nee") or "", *suspicions])
    if any(_CHANGED_WITHIN in w for w in suspicions):
        # months that look like another unit or sign: where they are a file of their own,
        # that file alone is judged as a one-file record would be
        refusals |= _file_mixups(converted, units, mapping, interval_minutes, potential,
                                 missing, starts, combined["sources"], refusals)
        # and where the record splits into two parts told apart in two units, refused
        for warning in suspicions:
            name = _warned_variable(warning, mapping)
            if name is None or name in refusals:
                continue
            split = _unit_changed_within(name, warning, values[name], converted, units,
                                         mapping, interval_minutes, potential, missing,
                                         starts, combined["sources"], strict=False)
            if split:
                refusals[name] = split
    refusals |= _relabelled_refusals(suspicions, refusals, parts, mapping, units, starts,
                                     combined["sources"])
    for name, message in refusals.items():
        message = _unit_changed_within(name, message, values[name], converted, units,
                                       mapping, interval_minutes, potential, missing, starts,
                                       combined["sources"]) or message
        message += row_units.read_clause(name, stated)
        accepted.append(_refuse_or_warn(name, message, accept_units, warnings, preflight))
    for name in converted:
        message = implausible_message(name, converted[name], values[name], units.get(name),
                                      mapping[name], missing, interval_minutes)
        if message and name not in refusals:
            message += row_units.read_clause(name, stated)
            if len(parts) > 1:
                message += relabelled_range_clause(_relabelled(name, parts, units),
                                                   units.get(name) or units_for(name)[0])
            accepted.append(_refuse_or_warn(name, message, accept_units, warnings, preflight))
    _blank_undeclared_codes(values, converted, mapping, missing, warnings)

    derived: list[str] = []
    source_of = dict(mapping)
    storage_missing, storage_smooths, filled_label = 0, False, False
    if "storage" in converted:
        turbulent, storage = converted["nee"], converted.pop("storage")
        lacking = np.isfinite(turbulent) & ~np.isfinite(storage)
        storage_missing = int(lacking.sum())
        if storage_missing and not np.isfinite(storage).any():
            # every NEE would be missing, and the error would blame the flux column
            raise MissingColumnError(
                f"[input.columns] storage = {setting_text(mapping['storage'])}: the column has no "
                "values at all (every cell empty or a missing code), so no record has NEE "
                f"(the turbulent flux in {mapping['nee']!r} + storage); check the column and the "
                "missing codes, or remove the storage mapping to use the turbulent flux alone")
        converted["nee"] = turbulent + storage
        source_of["nee"] = f"{mapping['nee']} + {mapping['storage']} (storage)"
        # the storage read in another unit than the flux (mistakes40)
        from .storage_labels import storage_unit_apart

        apart = storage_unit_apart(units.get("nee"), units.get("storage"), interval_minutes)
        if apart:
            from .storage_labels import storage_unit_ratio
            from .storage_size import storage_unit_oversized

            # apart and too large as read, not in the flux's unit: refused (mistakes56),
            # as the reader's other refusals: listed by a preflight, and kept with a
            # warning where accept_units lists storage (a store that large, rightly
            # declared: a sensor high over a short canopy; round review80)
            ratio = storage_unit_ratio(units.get("nee"), units.get("storage"))
            oversized = storage_unit_oversized(storage, starts, interval_minutes,
                                               getattr(site, "canopy", None), ratio)
            if oversized:
                flux_unit = units.get("nee") or units_for("nee")[0]
                accepted.append(_refuse_or_warn("storage", (
                    f"[input.units] storage = {setting_text(units.get('storage'))} reads the "
                    f"storage column {ratio:.3g} times larger than the unit of the flux it is "
                    f"added to ({flux_unit!r}), and so read it is too large {oversized}; "
                    f"read in the flux's unit it is not: a flux and its storage term are "
                    f"written by one program in one unit, so set [input.units] storage = "
                    f"{setting_text(flux_unit)} (or remove it; to keep a store that large as "
                    "declared, list storage in [input] accept_units)"),
                    accept_units, warnings, preflight))
            warnings.append(f"storage: {apart}")
        from .column_faults import (  # only where storage is mapped
            FLUX_COPY_WORDS,
            storage_in_turbulent_flux,
        )

        counted_twice = storage_in_turbulent_flux(turbulent, storage, starts, columns=mapping)
        # a storage column in another unit, too large for a short canopy (mistakes34):
        # named before the slope's causes, after a level (a running sum swings too)
        from .storage_size import LEVEL_WORDS, oversized_storage

        if not (counted_twice and (LEVEL_WORDS in counted_twice
                                   or FLUX_COPY_WORDS in counted_twice)):
            counted_twice = oversized_storage(storage, starts, interval_minutes,
                                              getattr(site, "canopy", None),
                                              mapping) or counted_twice
        if counted_twice is None:
            # a column labelled NEE holds storage by definition (mistakes38): named where
            # the values did not resolve it as a turbulent flux
            from .column_faults import slope_reads_turbulent
            from .storage_labels import nee_label_beside_storage

            labelled = nee_label_beside_storage(mapping["nee"], mapping["storage"])
            if labelled and not slope_reads_turbulent(turbulent, storage, starts):
                counted_twice = labelled
        if counted_twice is None and potential is not None:
            # a storage column whose changes smooth NEE (mistakes41: the maize store ×10
            # was named only as a smoothed NEE column)
            from .storage_size import storage_smooths_nee

            counted_twice = storage_smooths_nee(turbulent, storage,
                                                np.asarray(potential) <= 0.0, starts,
                                                interval_minutes, mapping)
            storage_smooths = counted_twice is not None
        if counted_twice is None and potential is not None and "tair" in converted:
            # night NEE following the store's own daily course: the store counted twice
            # where it repeats its course night after night (mistakes55)
            from .storage_course import night_nee_follows_storage

            counted_twice = night_nee_follows_storage(
                turbulent, storage, np.asarray(potential) <= 0.0, starts,
                [converted[name] for name in ("tair", "tsoil") if name in converted], mapping)
        if counted_twice and FLUX_COPY_WORDS in counted_twice:
            # a flux mapped as storage: NEE counted twice cannot be right (mistakes38)
            accepted.append(_refuse_or_warn(
                "storage", f"storage: {counted_twice} (to keep it, list storage in [input] "
                "accept_units)", accept_units, warnings, preflight))
        elif counted_twice:
            warnings.append(f"storage: {counted_twice}")
        else:
            # a logger's window on the turbulent flux, blurred in NEE by the storage term
            # added to it (review90)
            window = cut_before_storage(turbulent, storage, starts, mapping)
            if window:
                warnings.append(f"storage: {window}")
        if storage_missing:
            warnings.append(f"storage: {storage_missing} record(s) have a turbulent flux in "
                            f"{mapping['nee']!r} but no storage value in {mapping['storage']!r};"
                            " their NEE is missing and will be gap-filled")
    elif "nee" in mapping:
        # a storage column of the file left out beside a turbulent flux (mistakes40)
        from .storage_labels import unmapped_storage_column

        left_out = unmapped_storage_column(
            mapping["nee"], [column for part in parts for column in part["file_columns"]],
            [*mapping.values(), *flag_columns, *time_columns])
        if left_out:
            warnings.append(f"storage: {left_out}")
    if "nee" in mapping and not flag_columns:
        # the flux's quality flag column of the file left unmapped (round mistakes60)
        from .flag_labels import unmapped_flag_column

        unflagged = unmapped_flag_column(
            mapping["nee"], [column for part in parts for column in part["file_columns"]],
            [*mapping.values(), *time_columns])
        if unflagged:
            warnings.append(f"nee_flag: {unflagged}")
    if "nee" in mapping:
        # a flux column labelled gap-filled (mistakes40)
        from .fill_labels import filled_nee_label

        filled = filled_nee_label(mapping["nee"])
        if filled:
            warnings.append(f"nee: {filled}")
            filled_label = True
    if "ppfd" in converted:
        ppfd = converted.pop("ppfd")
        if "rg" not in converted:
            converted["rg"] = ppfd / PPFD_PER_RG
            derived.append("rg")
            source_of["rg"] = f"{mapping['ppfd']} (ppfd / {PPFD_PER_RG:.2f} µmol J-1)"
        else:
            warnings.append("ppfd: mapped together with rg; rg is used and ppfd ignored")
    if "rg" in converted and len(set(combined["sources"])) > 1:
        # layouts33: a first file of start marks before files of end marks was read one
        # record early without a word (one record inserted at the join)
        from .file_joins import boundary_gap_message

        joined = boundary_gap_message(starts, combined["sources"], converted["rg"],
                                      potential, interval_minutes)
        if joined:
            raise TimestampError(joined)
    flag_rejected, flag_rejected_with_nee = 0, None
    if flag_columns and word_counts:
        numbers = [value for value in word_counts if flag_is_number(value)]
        if len(numbers) == len(word_counts):
            # words listed for a column of numbers: every record would be rejected
            raise ConfigError(
                f"[input] flag_accept = {setting_text(list(flag_accept))} lists words, but "
                f"the flag column(s) {', '.join(repr(c) for c in flag_columns)} hold numbers "
                f"only ({', '.join(numbers[:6])}): list the numbers that keep a record, "
                "e.g. flag_accept = [0, 1]")
        warnings.append(ReaderNote(flag_counts_note(flag_columns, word_counts, words)))
    if flag_columns:
        flags = [combined["values"][_flag_key(column)] for column in flag_columns]
        converted["nee_flag"] = _combine_flags(
            flags, flag_accept_codes(words) if words else flag_accept)
        flag_rejected = int(np.nansum(converted["nee_flag"]))
        flag_rejected_with_nee = int(np.sum((converted["nee_flag"] == 1)
                                            & np.isfinite(converted["nee"])))
        source_of["nee_flag"] = " + ".join(flag_columns)
        # a flag_accept that keeps every value the flag holds (round mistakes61)
        keeps_all = keeps_every_value(flags, flag_columns, converted["nee"],
                                      converted["nee_flag"], flag_accept,
                                      lambda value: flag_shown(value, words, word_counts))
        if keeps_all:
            warnings.append(keeps_all)
        # a flag that rejects most records is more likely a wrong flag_accept than a site
        # whose own checks discard most of its data (our choice: half), judged over the
        # records with an NEE value as the refusal is (review41): a flag written bad
        # wherever NEE is missing (common practice) rejects nothing more (round
        # falsealarm51: three clean site-years of 50-52 % of all records, their gaps
        # among them, were named)
        judged = int((np.isfinite(converted["nee_flag"]) & np.isfinite(converted["nee"])).sum())
        if judged and flag_rejected_with_nee > 0.5 * judged:
            flag_values = np.unique(np.concatenate([f[np.isfinite(f)] for f in flags]))[:10]
            warnings.append(f"nee_flag: {flag_rejected_with_nee} of {judged} records with an "
                            f"NEE value ({100 * (flag_rejected_with_nee / judged):.0f} %) are "
                            "rejected by "
                            f"{' + '.join(flag_columns)} with [input] flag_accept = "
                            f"{list(flag_accept)}; the flags hold "
                            f"{[flag_shown(v, words, word_counts) for v in flag_values]}"
                            f"{_in_brackets(many_values_text(flags, flag_columns))}: check which values mean a good "
                            "record")
        elif not words:
            # a third rejected, a middle grade among them (0-1-2 under flag_accept = [0]):
            # `check` named no problem (round leftovers61)
            middle = middle_grade_warning(flags, flag_columns, flag_accept,
                                          converted["nee"], converted["nee_flag"])
            if middle:
                warnings.append(middle)
    if "vpd" not in converted:
        converted["vpd"] = vpd_from_rh(converted["rh"], converted["tair"])
        derived.append("vpd")
        source_of["vpd"] = "derived from rh and tair"

    for name in REQUIRED:
        if name in converted and not np.isfinite(converted[name]).any():
            raise MissingColumnError(_empty_required_message(name, mapping, derived))
    if flag_columns and "nee" in converted:
        measured = np.isfinite(converted["nee"])
        if measured.any() and not (measured & (converted["nee_flag"] != 1.0)).any():
            # no NEE record left: every stage would fail, and run named only the partitioning
            read_flags = [combined["values"][_flag_key(c)] for c in flag_columns]
            flag_values = np.unique(np.concatenate(
                [f[np.isfinite(f)] for f in read_flags]))[:10]
            raise ImplausibleValueError(
                f"nee_flag: every record with a value in {source_of['nee']!r} is rejected by "
                f"{' + '.join(flag_columns)} with [input] flag_accept = {list(flag_accept)}; "
                f"the flags hold {[flag_shown(v, words, word_counts) for v in flag_values]}"
                f"{_in_brackets(many_values_text(read_flags, flag_columns))}: set [input] "
                "flag_accept to "
                "the values that mean a good record (or remove nee_flag from [input.columns])")
        # judged over the records with an NEE value (review41: a flag that marks every
        # record without NEE bad, as many processing programs write it, at a tower whose
        # NEE starts late in the year was refused as a flag of the other scale)
        with_nee = measured & np.isfinite(converted["nee_flag"])
        judged_nee = int(with_nee.sum())
        if judged_nee >= 48 and flag_rejected_with_nee > _FLAG_REFUSE * judged_nee:
            # layouts33: a flag of the other scale (2 good, 0 bad) under flag_accept = [0]
            # kept 25 of 17520 records with a warning and the run stopped at the
            # partitioning, naming missing night records; process() refuses such a
            # frame's flag (unit_checks.frame_refusal), the reader now does too
            raise ImplausibleValueError(_flag_scale_message(
                [combined["values"][_flag_key(c)][with_nee] for c in flag_columns],
                flag_columns, flag_accept, flag_rejected_with_nee, judged_nee, words,
                word_counts))

    order = [name for name in VARIABLES if name in converted]
    frame = pd.DataFrame({name: converted[name].astype(np.float64) for name in order},
                         index=starts)
    full = pd.date_range(starts[0], starts[-1], freq=f"{interval_minutes}min", name="time")
    inserted = full.difference(starts)
    frame = frame.reindex(full)
    frame.index.name = "time"
    ranges, runs = inserted_runs(inserted, interval_minutes)
    if len(full) and len(inserted) > 0.25 * len(full):
        warnings.append(f"{len(inserted)} of {len(full)} stamps "
                        f"({100 * (len(inserted) / len(full)):.0f} %) "
                        "are absent from the file and were inserted as missing; check "
                        "interval_minutes and whether the file changes its interval")
    for name in mapping:
        if name in converted and not np.isfinite(values[name]).any():
            warnings.append(f"{name}: column {mapping[name]!r} has no values at all "
                            "(every cell empty or a missing code)")
    outside = {}
    for name in order:
        variable = VARIABLES[name]
        column = np.asarray(converted[name], dtype=np.float64)
        with np.errstate(invalid="ignore"):
            beyond = np.flatnonzero((column < variable.minimum) | (column > variable.maximum))
        outside[name] = int(beyond.size)
        if outside[name]:
            # the first such record's line: a record whose fields shifted by one or a cell
            # that lost a digit is found there (readfuzz54: named no place)
            warnings.append(f"{name}: {outside[name]} value(s) outside the plausible range "
                            f"[{variable.minimum:g}, {variable.maximum:g}] {variable.unit} "
                            f"(the first on {describe(int(beyond[0]))}); "
                            "screening will reject them"
                            + _code_hint(name, values, converted[name], derived, missing))
    if outside.get("nee"):
        from .foreign_days import foreign_days
        text = foreign_days(frame["nee"].to_numpy(), frame.index, VARIABLES["nee"].minimum,
                            VARIABLES["nee"].maximum, column=source_of["nee"],
                            unit=VARIABLES["nee"].unit)
        warnings.extend([text] if text else [])
    if interval_change and "nee" in frame:
        # NEE summed over the longer records (round mistakes51)
        from .summed_records import summed_stretch
        text = summed_stretch(frame["nee"].to_numpy(), frame.index, starts, interval_minutes,
                              source_of["nee"])
        warnings.extend([text] if text else [])
    report = ReadReport(
        source=", ".join(str(p) for p in paths),
        interval_minutes=interval_minutes,
        time_marks=time_marks,
        shift_minutes=shift_minutes,
        records_read=combined["records_read"],
        records=len(frame),
        first_start=full[0] if len(full) else None,
        last_start=full[-1] if len(full) else None,
        stamps_inserted=len(inserted),
        inserted_ranges=ranges,
        inserted_runs=runs,
        columns={name: source_of[name] for name in order},
        units={name: units[name] for name in list(order) + ["storage", "ppfd"]
               if name in units},
        missing_codes=missing,
        derived=tuple(derived),
        missing_cells={name: combined["missing_cells"][name] for name in mapping},
        outside_range=outside,
        warnings=warnings_of(warnings),
        notes=notes_of(warnings),
        files=tuple(str(p) for p in paths),
        encodings=tuple({part.get("file", part["source"]): part["encoding"]
                         for part in parts}.values()),
        duplicate_rows=combined["duplicate_rows"],
        merged_rows=combined["merged_rows"],
        header_trailing_delimiter=combined["header_trailing_delimiter"],
        absent_columns=absent,
        renamed_columns={other: (name, len(files))
                         for (other, name), files in renamed_in.items()},
        stamp_conversions=combined["conversions"] | (
            {"time_zone": time_zone} if time_zone else {}),
        nonfinite_cells={name: combined["nonfinite_cells"][name] for name in mapping},
        flag_accept=flag_accept,
        flag_rejected=flag_rejected,
        flag_rejected_with_nee=flag_rejected_with_nee,
        storage_missing=storage_missing,
        accepted_units=tuple(sorted(set(name for name in accepted if name))),
        unit_refusals=tuple(preflight or ()),
    )
    if written_limit is not None:
        # the preflight's cut rule leaves this end of NEE to the reader's message
        frame.attrs["nee_written_limit"] = written_limit
    # findings of the preflight that a message here names already (screening_stage
    # leaves them out; a mark, not the message's wording: review47)
    if storage_smooths:
        from .storage_size import STORAGE_SMOOTHS_MARK

        frame.attrs[STORAGE_SMOOTHS_MARK] = True
    if filled_label:
        from .fill_labels import FILLED_LABEL_MARK

        frame.attrs[FILLED_LABEL_MARK] = True
    if accept_units:
        # read_config -> process: process checks a caller's frame's units again, but not
        # those the site config accepted as they are
        frame.attrs["accept_units"] = tuple(accept_units)
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
    "path": "give the record file, relative to the site config, e.g. path = \"tower.csv\" "
            "(or a list, or a glob such as \"tower_*.csv\")",
    "time_column": "name the column holding the stamps, e.g. time_column = \"timestamp\" "
                   "(or [\"date\", \"time\"])",
    "time_format": "give the stamp format, e.g. time_format = \"%Y-%m-%d %H:%M\"",
    "time_marks": "say where the stamps sit in their averaging interval: "
                  "time_marks = \"start\", \"middle\" or \"end\"",
    "columns": "add an [input.columns] table: canonical name = column in the file",
}


def table_of_key(key: str) -> str | None:
    """The site-config table that takes `key` (``"site"``, ``"input"`` or
    ``"processing"``), or None for a key of none of them."""
    settings = tuple(f.name for f in fields(Config))
    return next((name for name, keys in (("site", _SITE_KEYS), ("input", _INPUT_KEYS),
                                         ("processing", settings)) if key in keys), None)


def _check_keys(table: dict, valid, where: str, spell: str) -> None:
    for key in table:
        if key not in valid:
            owner = table_of_key(key) if where in ("[site]", "[input]") else None
            if owner is not None:
                # a setting of another table (seed under [site], canopy under [input])
                raise ConfigError(f"{where} {key} = {setting_text(table[key])}: {key} "
                                  f"belongs under [{owner}], not {where}: move it there")
            if where == "site config: top-level table" and key in ("columns", "units"):
                raise ConfigError(f"site config: the table [{key}] belongs under [input]: "
                                  f"write it as [input.{key}]")
            if where == "site config: top-level table" and not isinstance(table[key], dict):
                # a key written above the first [table] header belongs to no table
                owner = table_of_key(key)
                move = (f"move it under [{owner}]" if owner else
                        "move it under the table it belongs to ([site], [input] or "
                        "[processing])")
                raise ConfigError(f"site config: {key} = {setting_text(table[key])} stands "
                                  f"above the first [table] header, outside any table: {move}")
            if isinstance(table[key], dict) and where.startswith("[") and spell == "{key}":
                parent = where[1:-1]
                tables = [v for v in valid if v in ("columns", "units")] or list(valid)
                close = difflib.get_close_matches(key, tables, n=1, cutoff=0.5)
                hint = f"; did you mean [{parent}.{close[0]}]?" if close else ""
                raise ConfigError(f"table [{parent}.{key}] is unknown{hint}")
            hint = (table_meaning_hint(key, where[1:-1], valid)
                    if where in ("[site]", "[input]") else None)
            hint = hint or suggest_key(key, valid, "keys" if "table" not in where else "tables")
            raise ConfigError(f"{where} {spell.format(key=key)} is unknown{hint}")


def _loop_safe_glob(pattern: str) -> list:
    """The paths ``glob.glob(pattern, recursive=True)`` gives, without following a link
    back into one of its own enclosing folders.

    A tree without such a link gets exactly ``glob.glob``'s list. With one, ``glob``
    follows each looping link until the kernel's limit of 40 links, and with two looping
    links in one ``**`` expansion it branches at every level (about 2**40 paths) and never
    returns; the same walk is then made here with the looping links left out: ``**``
    matches zero or more folders not starting with '.', any other component is matched
    with ``fnmatch`` (a name starting with '.' only by a pattern starting with '.'), as
    glob does. A link to a folder that is not an enclosing one (``latest -> 2021/06``) is
    followed, as by glob; :func:`_glob_files` keeps each file once.

    Parameters
    ----------
    pattern : str
        Absolute or relative glob pattern; ``**`` spans folders.

    Returns
    -------
    list of str
        Matching paths (files and folders), unsorted.

    References
    ----------
    ``path_resolution(7)``: a path resolution follows at most 40 symbolic links (m);
    Python documentation, ``glob``: "If recursive is true, the pattern '**' will match any
    files and zero or more directories"; files beginning with '.' are matched only by a
    pattern that begins with '.' (m).
    """
    if "**" not in Path(pattern).parts:
        return glob.glob(pattern, recursive=True)
    found, looped = _walk_without_loops(pattern)
    if not looped:
        # no link back into an enclosing folder: glob's own list, as before
        return glob.glob(pattern, recursive=True)
    return found


def _walk_without_loops(pattern: str) -> tuple:
    """``pattern``'s matches as :func:`_loop_safe_glob` describes, and whether a link
    back into an enclosing folder was left out: (list of str, bool).

    References
    ----------
    Python documentation, ``glob`` and ``fnmatch`` (m); ``path_resolution(7)`` (m).
    """
    parts = Path(pattern).parts
    found: list = []
    looped = [False]

    def hidden(name: str) -> bool:
        return name.startswith(".")

    def entries(folder: str) -> list:
        try:
            with os.scandir(folder or ".") as listing:
                return sorted(entry.name for entry in listing)
        except OSError:
            return []

    def real(path: str) -> str:
        return os.path.realpath(path or ".")

    def visit(folder: str, rest: tuple, chain: frozenset) -> None:
        if not rest:
            found.append(folder)
            return
        head, tail = rest[0], rest[1:]
        if head == "**":
            visit(folder, tail, chain)
            for name in entries(folder):
                path = os.path.join(folder, name)
                if hidden(name):
                    continue
                if os.path.isdir(path):
                    target = real(path)
                    if target in chain:
                        looped[0] = True
                        continue
                    visit(path, rest, chain | {target})
                elif not tail:
                    found.append(path)
            return
        if not glob.has_magic(head):
            path = os.path.join(folder, head)
            if not tail:
                if os.path.lexists(path):
                    found.append(path)
            elif os.path.isdir(path):
                visit(path, tail, chain | {real(path)})
            return
        for name in entries(folder):
            if hidden(name) and not hidden(head):
                continue
            if not fnmatch.fnmatchcase(name, head):
                continue
            path = os.path.join(folder, name)
            if not tail:
                found.append(path)
            elif os.path.isdir(path):
                visit(path, tail, chain | {real(path)})

    start = parts[0] if Path(pattern).is_absolute() else ""
    rest = parts[1:] if start else parts
    visit(start, tuple(rest), frozenset({real(start)}))
    if pattern.endswith(("/", os.sep)):
        # a pattern ending in a separator matches folders only, as in glob
        found = [path for path in found if os.path.isdir(path)]
    return found, looped[0]


def _glob_files(pattern: str, item: str) -> list:
    """The files the glob `pattern` (of ``[input] path = item``) matches, sorted, each once.

    A match that is a dangling or looping link or a special file is refused
    (:func:`fluxpart._validate.odd_entry`) rather than dropped. One file reached under several paths (a
    link to a folder such as ``latest -> 2021/06`` inside a ``**`` pattern, or a link
    back to a parent folder, which ``glob`` follows until the kernel's limit of 40 links
    and so listed one file 41 times) is kept once, under its shortest path (the first
    such in sorted order): the same records read again were dropped as duplicates, but
    the manifest listed the file under every path. The files are returned in the sorted
    order of those paths, as before for a glob without links.

    References
    ----------
    ``path_resolution(7)``: a path resolution follows at most 40 symbolic links (m);
    ``stat(2)``: one file is one (st_dev, st_ino) pair whatever path reaches it (m);
    Python documentation, ``os.stat_result.st_ino``: platform dependent, "if non-zero,
    uniquely identifies the file for a given value of st_dev" (m): a path whose inode
    number is 0 is its own file.
    """
    found: dict = {}
    for path in sorted(Path(text) for text in _loop_safe_glob(pattern)):
        text = str(path)
        odd = odd_entry(path)
        if odd:
            raise ConfigError(f"[input] path = {setting_text(item)} matches {text!r}, {odd}: "
                              "its records would be left out without a word; restore or mount "
                              "what it stands for, or remove it, or narrow the pattern")
        if not path.is_file():
            continue
        try:
            facts = path.stat()
        except OSError:
            facts = None
        # an inode number of 0 identifies no file: Python's os.stat_result.st_ino is
        # "if non-zero, uniquely identifies the file"; file systems that have none (some
        # network shares, FAT and FUSE mounts) give 0 for every file, which made all the
        # matches one file and kept the first month only (review35)
        identity = (facts.st_dev, facts.st_ino) if facts is not None and facts.st_ino \
            else text
        if identity not in found or len(path.parts) < len(found[identity].parts):
            found[identity] = path
    return sorted(found.values())


def _resolve_paths(value, folder: Path) -> tuple:
    """``[input] path`` (a file, a list or a glob) -> existing files, relative to `folder`."""
    items = value if isinstance(value, list) else [value]
    if not items:
        raise ConfigError("[input] path = []: give at least one file")
    found: list[Path] = []
    for item in items:
        if not isinstance(item, str) or not item.strip():
            raise ConfigError(f"[input] path = {setting_text(value)}: expected a file path (a string, "
                              "relative to the site config), a list of them or a glob")
        if item.startswith("~") and not (folder / item).exists() and not glob.glob(
                str(folder / item)):
            # no shell reads the config: '~' would name a folder beside it, and a home
            # folder differs from user to user, so the same config would read other files
            raise ConfigError(f"[input] path = {setting_text(item)}: '~' is not expanded to a "
                              "home folder in a site config; write the path relative to the "
                              f"site config or in full (e.g. {str(Path(item).expanduser())!r})")
        if _GLOB_CHARACTERS & set(item):
            # the config's own folder is a place, not a pattern: "Site [A]/" holds brackets
            pattern = item if Path(item).is_absolute() else str(
                Path(glob.escape(str(folder))) / item)
            # "**" spans any depth of folders (logger/2021/06/...), as in [batch] sites
            matches = _glob_files(pattern, item)
            literal = Path(item) if Path(item).is_absolute() else folder / item
            if literal.is_file():
                # a file whose name holds a glob character ("tower[1].csv"): that file
                matches = [literal]
            elif not matches and "[" in item:
                # brackets in a folder's or file's name ("Tower [old]/q_*.csv") are a
                # character class to glob, which then matches nothing: read them as written
                escaped = item.replace("[", "[[]")
                escaped = escaped if Path(item).is_absolute() else str(
                    Path(glob.escape(str(folder))) / escaped)
                matches = _glob_files(escaped, item)
            if not matches:
                # a glob's backslash is part of a name outside Windows (as for one file)
                slashes = other_system_path_hint(item)
                raise ConfigError(f"[input] path = {setting_text(item)} matches no file in "
                                  f"{str(literal.parent)!r}{slashes}")
            configs = [p for p in matches if p.suffix.lower() == ".toml"]
            if configs:
                # a pattern as wide as "*" also takes the site config (and its neighbours)
                raise ConfigError(f"[input] path = {setting_text(item)} matches the TOML file "
                                  f"{str(configs[0])!r} ({len(configs)} in all), which is a "
                                  "config, not a data table: narrow the pattern to the data "
                                  "files (e.g. \"*.csv\")")
            found.extend(matches)
        else:
            if not (folder / item).exists():
                elsewhere = _other_folder_hint(item, folder)
                if elsewhere:
                    raise ConfigError(f"[input] path = {setting_text(item)}: no such file in "
                                      f"the site config's folder {str(folder)!r}{elsewhere}")
            found.append(folder / item)
    repeated = [p for i, p in enumerate(found) if p in found[:i]]
    if repeated:
        raise ConfigError(f"[input] path names {str(repeated[0])!r} more than once")
    return tuple(found)


def _other_folder_hint(item: str, folder: Path) -> str:
    """Where a relative ``[input] path`` missing beside the config names a file relative to
    the current folder or to a folder above the config's (a path written from where the
    command was run, or from the project's top folder: round mistakes41), the hint
    naming that file; "" otherwise."""
    if Path(item).is_absolute():
        return ""
    for base in (Path.cwd(), *list(folder.resolve().parents)[:3]):
        candidate = base / item
        if candidate.is_file() and candidate.resolve() != (folder / item).resolve():
            return (f"; it names {str(candidate)!r} relative to {str(base)!r}: [input] path is "
                    "read relative to the site config's own folder (so a run from any folder "
                    "reads the same file): write it relative to that folder, or in full")
    return ""


def _as_paths(path) -> list:
    if isinstance(path, (list, tuple)):
        if not path:
            raise ConfigError("[input] path: no file given")
        return [Path(p) for p in path]
    return [Path(path)]


def _check_time_column(value) -> tuple:
    items = value if isinstance(value, (list, tuple)) else [value]
    if isinstance(value, str) and not value.strip():
        # an empty name: the stamp column of a table saved with its row index has none
        raise ConfigError(f"[input] time_column = {setting_text(value)}: a column is named by "
                          "the name its header cell writes, and an empty header cell names "
                          "no column (a table saved with its row index writes its stamps "
                          "under one): write a name into that cell in a copy of the file, "
                          "e.g. \"stamp\", and set time_column to it")
    if not items or any(not isinstance(item, str) or not item for item in items):
        raise ConfigError(f"[input] time_column = {setting_text(value)}: expected a column name, or a "
                          "list of columns joined with one space (e.g. [\"date\", \"time\"])")
    if len(set(items)) != len(items):
        raise ConfigError(f"[input] time_column = {setting_text(value)} names a column twice")
    return tuple(items)


def _split_flag_columns(columns) -> tuple[dict, tuple]:
    """Take ``nee_flag`` (one column or a list) out of the column mapping."""
    if not isinstance(columns, dict):
        raise ConfigError(f"[input.columns] must be a table of name = \"text\", found {columns!r}")
    columns = dict(columns)
    flags = columns.pop("nee_flag", None)
    if flags is None:
        return columns, ()
    items = flags if isinstance(flags, (list, tuple)) else [flags]
    if not items or any(not isinstance(item, str) or not item for item in items):
        raise ConfigError(f"[input.columns] nee_flag = {setting_text(flags)}: expected a column name or a "
                          "list of flag columns")
    if len(set(items)) != len(items):
        raise ConfigError(f"[input.columns] nee_flag = {setting_text(flags)} names a column twice")
    return columns, tuple(items)


def _string_table(table, where: str) -> dict:
    if not isinstance(table, dict):
        raise ConfigError(f"{where} must be a table of name = \"text\", found {table!r}")
    out = {}
    for key, value in table.items():
        if key not in READER_VARIABLES:
            raise ConfigError(f"{where} {key} is not a canonical variable"
                              f"{suggest_key(key, READER_VARIABLES, 'variables')}")
        if key == "nee_flag" and where == "[input.columns]" and isinstance(value, list):
            out[key] = value
            continue
        if isinstance(value, list) and where == "[input.columns]":
            # two analysers, or a flux and its storage, in one variable
            raise ConfigError(f"{where} {key} = {setting_text(value)}: expected one column "
                              "name; only nee_flag takes a list of columns (the storage "
                              "flux added to NEE is mapped as storage)")
        if not isinstance(value, str) or not value:
            raise ConfigError(f"{where} {key} = {setting_text(value)}: expected a non-empty string")
        out[key] = value
    return out


def _check_mapping(columns: dict, units: dict, flag_columns: tuple = ()) -> None:
    columns = dict(columns)
    flags = columns.pop("nee_flag", None)
    if flags is not None:
        flag_columns = tuple(flags) if isinstance(flags, list) else (flags,)
    seen: dict[str, str] = {}
    pairs = list(columns.items()) + [("nee_flag", column) for column in flag_columns]
    for name, column in pairs:
        if column in seen:
            raise ConfigError(f"[input.columns] file column {column!r} is mapped twice, to "
                              f"{seen[column]} and to {name}; each canonical variable needs "
                              "its own column")
        seen[column] = name
    if "storage" in columns and "nee" not in columns:
        raise ConfigError("[input.columns] storage is mapped but nee is not; map the turbulent "
                          "CO2 flux as nee (storage is added to it)")
    for name, unit in units.items():
        if name in READER_VARIABLES and unit not in units_for(name):
            same = [u for u in units_for(name) if u.lower() == str(unit).lower()]
            if len(same) == 1:     # kpa for kPa: unit letters are case-sensitive (mPa, MPa)
                raise UnitError(f"[input.units] {name} = {setting_text(unit)} is not a known "
                                f"unit for {name}; did you mean {setting_text(same[0])}? (unit "
                                "symbols are case-sensitive)")
        to_canonical(np.empty(0), name, unit, interval_minutes=30)  # UnitError lists units


def _unit_spellings(units: dict) -> dict:
    """`units` with each spelling that differs from an accepted one only in look-alike
    characters (Greek mu, superscripts, minus sign) replaced by it."""
    return {name: unit_spelling(name, unit) for name, unit in units.items()}


#: Likeness (difflib ratio, 0..1) above which a time_marks value is taken for a slip of
#: one of its three words (a typo, another case). A looser match named the opposite mark:
#: "stop" -> "start", "begin" and "centre" -> "end" (cutoff 0.4; review63), a hint that
#: shifts every stamp by one interval. 0.6 is difflib's own default (m).
TIME_MARKS_LIKENESS = 0.6


def _check_time_marks(value) -> str:
    """Return `value`, a valid ``[input] time_marks``, or raise naming the three choices.

    A hint is given only for a slip of one word (``"Start"``, ``"middel"``, ``"endd"``);
    another word (``"begin"``, ``"stop"``, ``"centre"``) gets the meaning of each choice
    instead, since a hint to the wrong end moves every stamp by one record.

    References
    ----------
    Python documentation, ``difflib.get_close_matches`` (m).
    """
    if value not in TIME_MARKS:
        close = difflib.get_close_matches(str(value).strip().lower(), TIME_MARKS, n=1,
                                          cutoff=TIME_MARKS_LIKENESS)
        hint = (f"; did you mean {setting_text(close[0])}?" if close else
                " (the place in its averaging interval each stamp of the time column marks: "
                "its start, middle or end; a stamp of 00:30 on the first half-hour of a day "
                "marks its end)")
        raise ConfigError(f"[input] time_marks = {setting_text(value)}: expected one of "
                          f"{', '.join(setting_text(m) for m in TIME_MARKS)}{hint}")
    return value


def _check_missing(value) -> tuple:
    if isinstance(value, (str, int, float)) and not isinstance(value, bool):
        value = [value]
    if not isinstance(value, (list, tuple)):
        raise ConfigError(f"[input] missing = {setting_text(value)}: expected a list of codes, "
                          "e.g. missing = [-9999, \"NA\"]")
    for code in value:
        if isinstance(code, bool) or not isinstance(code, (str, int, float)):
            raise ConfigError(f"[input] missing: code {setting_text(code)} must be a number "
                              "or a string, e.g. missing = [-9999, \"NA\"]")
    return tuple(value)


def _check_delimiter(value) -> str:
    if value == _WHITESPACE:
        return value
    if isinstance(value, str) and value.strip().lower() in ("\\t", "tab", "<tab>"):
        # TOML reads '\t' (single quotes, a literal string) as a backslash and a t
        raise ConfigError(f"[input] delimiter = {setting_text(value)} is {len(value)} "
                          "characters, not the tab: write delimiter = \"\\t\" in double "
                          "quotes (in single quotes '\\t' is a backslash and a t)")
    if not isinstance(value, str) or len(value) != 1:
        raise ConfigError(f"[input] delimiter = {setting_text(value)}: expected a single character such "
                          "as \",\", \";\" or \"\\t\", or \"whitespace\"")
    return value


def _check_column_widths(value, delimiter) -> tuple:
    """``[input] column_widths``: characters of each column of a fixed-width file, in
    order (layouts35); () where not set. Refused beside a delimiter, which it replaces."""
    if value is None or (isinstance(value, (list, tuple)) and not value):
        return ()
    if (not isinstance(value, (list, tuple)) or len(value) < 2 or any(
            isinstance(width, bool) or not isinstance(width, int) or width < 1
            for width in value)):
        raise ConfigError(f"[input] column_widths = {setting_text(value)}: expected the "
                          "characters of each column of a fixed-width file, left to right, "
                          "as whole numbers of 1 or more, e.g. [12, 8, 8, 8]")
    if delimiter is not None:
        raise ConfigError(f"[input] column_widths and delimiter = {setting_text(delimiter)} "
                          "are both set: column_widths cuts the fields of a fixed-width file "
                          "at its widths, a delimiter separates them; keep the one that "
                          "fits the file")
    return tuple(value)


def _check_decimal(value, delimiter: str) -> str:
    if value not in (".", ","):
        raise ConfigError(f"[input] decimal = {setting_text(value)}: expected \".\" or \",\"")
    # decimal = delimiter = ",": a CSV writer quotes every cell holding the delimiter
    # ("0,329"), so such a file is read as written; unquoted, its lines hold more fields
    # than the header, which the reader names with the delimiter
    return value


def _check_encoding(value):
    if value is None:
        return None
    if not isinstance(value, str) or not value:
        raise ConfigError(f"[input] encoding = {setting_text(value)}: expected an encoding name such as "
                          "\"latin-1\" or \"utf-16\"")
    try:
        codecs.lookup(value)
    except LookupError:
        raise ConfigError(f"[input] encoding = {setting_text(value)} is not a known text encoding; use "
                          "e.g. \"utf-8\", \"latin-1\", \"cp1252\" or \"utf-16\"") from None
    return value


def _check_note_mark(value):
    """``[input] note_mark``: what opens a note line among the records, or None."""
    if value is None:
        return None
    if (not isinstance(value, str) or not value.strip() or value != value.strip()
            or re.match(r"[\d+\-.,\"]", value)):
        raise ConfigError(f"[input] note_mark = {setting_text(value)}: expected the "
                          "characters that open a note line among the records, e.g. \"#\" "
                          "or \";\" (not a digit, sign, point, comma, quote or blank, which "
                          "open records)")
    return value


def _check_rows(value, name: str) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < 0:
        raise ConfigError(f"[input] {name} = {setting_text(value)}: expected a whole number of lines >= 0")
    return value


def _check_interval(value):
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) \
            or value not in INTERVALS_MINUTES:
        raise ConfigError(f"[input] interval_minutes = {setting_text(value)}: expected 30 or 60, "
                          "or leave it out to infer it from the stamps")
    return int(value)


def _check_flag_accept(value) -> tuple:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        value = [value]
    if isinstance(value, str):
        value = [value]
    if isinstance(value, (list, tuple)) and value and all(
            isinstance(v, str) and v.strip() for v in value):
        # flags written as words or grade letters (layouts49; refused before)
        return tuple(v.strip() for v in value)
    if isinstance(value, (list, tuple)) and any(isinstance(v, str) and not v.strip()
                                                for v in value):
        # review70: named "numbers or words, not both" before, where no number is listed
        raise ConfigError(f"[input] flag_accept = {setting_text(value)} lists an empty word: "
                          "an empty flag cell is no flag (its record is kept, as a missing "
                          "code's); list only the words that mean a good record, e.g. "
                          "flag_accept = [\"OK\"]")
    if isinstance(value, (list, tuple)) and any(isinstance(v, str) for v in value):
        raise ConfigError(f"[input] flag_accept = {setting_text(value)}: list the flag "
                          "values that keep a record as numbers or as words, not both "
                          "(a flag column holds one kind), e.g. flag_accept = [0, 1] or "
                          "flag_accept = [\"OK\"]")
    if (not isinstance(value, (list, tuple)) or not value
            or any(isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v)
                   for v in value)):
        raise ConfigError(f"[input] flag_accept = {setting_text(value)}: expected a list of the flag "
                          "values that keep a record, e.g. flag_accept = [0, 1]")
    return tuple(value)


def _flag_missing_codes(missing: tuple, flag_accept: tuple) -> tuple[tuple, list]:
    """The missing codes applied to the flag columns: `missing` without the flag values
    that keep a record, and the values so left out.

    Missing codes apply to every column, and the reader's own hint for a flux written 0
    where missing is to add 0 to `missing`; a flag whose good value is 0 then read as no
    flag in every record, and its warning ("most records are rejected, the flags hold
    [2]") pointed at `flag_accept` (mistakes17: on the example site, missing = [-9999, 0]).
    A value that keeps a record cannot mean "no flag" in the flag's own column.
    """
    if flag_are_words(flag_accept):
        # a listed word is no missing code in the flag columns either (review70: a word
        # both listed and in `missing` read as no flag, each such record kept unjudged)
        listed = set(flag_accept)
        kept = tuple(code for code in missing if str(code).strip() not in listed)
        return kept, sorted({str(code).strip() for code in missing} & listed)
    accepted = {float(v) for v in flag_accept}
    kept = tuple(code for code in missing if finite_number(code) not in accepted)
    left_out = sorted({finite_number(code) for code in missing} & accepted)
    return kept, left_out


def _check_missing_by_variable(value, columns) -> dict:
    """``[input.missing_by_variable]``: canonical name -> codes of that column only."""
    if not isinstance(value, dict):
        raise ConfigError(f"[input] missing_by_variable = {setting_text(value)}: expected a "
                          "table of canonical names and code lists, e.g. "
                          "[input.missing_by_variable] nee = [0]")
    checked = {}
    for name, codes in value.items():
        if name not in READER_VARIABLES or name == "nee_flag":
            raise ConfigError(f"[input.missing_by_variable] {name}: expected a canonical "
                              f"variable ({', '.join(v for v in READER_VARIABLES if v != 'nee_flag')})")
        if name not in columns:
            # a table of codes for a column the file does not map applies to nothing
            # (review37: rg = [0] beside a radiation column mapped as ppfd was ignored)
            other = {"rg": "ppfd", "ppfd": "rg"}.get(name)
            hint = (f"; the radiation column is mapped as {other}: write {other} = "
                    f"{setting_text(codes)}" if other in columns else "")
            raise ConfigError(f"[input.missing_by_variable] {name}: no column is mapped to "
                              f"{name} in [input.columns] (mapped: {', '.join(columns)}), so "
                              f"its codes would apply to no column{hint}")
        if not isinstance(codes, (list, tuple)):
            codes = [codes]
        try:
            checked[name] = _check_missing(list(codes))
        except ConfigError:
            raise ConfigError(f"[input.missing_by_variable] {name} = {setting_text(codes)}: "
                              f"expected a list of codes, e.g. {name} = [0]") from None
    return checked


def _refuse_ordinary_code(text, column, name, codes, judged, decimal, source, lines,
                          comma_file, stamps, time_marks, site, explicit=(),
                          code_cells=None) -> None:
    """Refuse a numeric missing code of ``[input] missing`` that is an ordinary reading of
    this column (:func:`fluxpart.code_values.ordinary_code_message`). Run only where
    `missing` holds a code of magnitude below
    :data:`~fluxpart.code_values.JUDGED_MAGNITUDE`, so other reads are unchanged; a code
    also listed for this column in `explicit` (``[input.missing_by_variable]``) is meant
    for it and not judged."""
    def number(code):
        found = _numeric_codes((code,), decimal)
        return found[0] if found else None

    judged = [code for code in judged if code not in {number(c) for c in explicit}]
    if not judged:
        return
    kept = tuple(c for c in codes if number(c) not in judged)
    written, _, _ = _numbers(text, column, name, kept, decimal, source, lines, comma_file)
    night = None
    if name in ("rg", "ppfd") and site is not None and len(stamps) > 1:
        index = pd.DatetimeIndex(stamps)
        seconds = index.values.astype("datetime64[s]").astype(np.int64)
        spacing = float(np.median(np.diff(seconds))) / 60.0
        minutes = int(round(spacing)) if 1 <= spacing <= 1440 else 30
        shift = {"start": 0.0, "middle": minutes / 2, "end": float(minutes)}.get(time_marks, 0.0)
        potential = _potential(index - pd.Timedelta(minutes=shift), site, minutes)
        night = np.asarray(potential) < NIGHT_POTENTIAL
    for code in judged:
        message = ordinary_code_message(name, column, code, written, night, source)
        if message:
            raise ConfigError(message)
        if code_cells is not None:
            code_cells.setdefault((name, column, code), []).append((written, night))


def _refuse_ordinary_code_of_files(code_cells, parts) -> None:
    """Refuse a missing code that is an ordinary reading of a column over all the files
    read (`code_cells`: (name, column, code) -> the numbers as written and the night mask
    of each file, from :func:`_refuse_ordinary_code`), where no file alone had the cells
    to tell (:data:`~fluxpart.code_values.MIN_CELLS`): a logger writing a file a day
    holds some 20 night readings of Rg in each. Nothing is judged for one file."""
    if not code_cells:
        return
    sources = [part["source"] for part in parts]
    shown = sources[0] + (f" and {len(sources) - 1} more file(s)" if len(sources) > 1 else "")
    for (name, column, code), pieces in code_cells.items():
        nights = [night for _, night in pieces]
        night = None if any(n is None for n in nights) else np.concatenate(nights)
        written = np.concatenate([np.asarray(values, dtype=float) for values, _ in pieces])
        message = ordinary_code_message(name, column, code, written, night, shown)
        if message:
            raise ConfigError(message)


def _check_other_names(value, columns, time_column) -> dict:
    """``[input.other_names]``: canonical name -> other names its mapped column has in
    some input files (a column renamed by a logger program's change; layouts35)."""
    if not isinstance(value, dict):
        raise ConfigError(f"[input] other_names = {setting_text(value)}: expected a table of "
                          "canonical names and name lists, e.g. [input.other_names] nee = "
                          "[\"co2_flux_v2\"]")
    times = (time_column,) if isinstance(time_column, str) else tuple(time_column)
    taken = {*times, *(v for v in columns.values() if isinstance(v, str))}
    checked = {}
    for name, others in value.items():
        mapped = columns.get(name)
        if not isinstance(mapped, str):
            raise ConfigError(f"[input.other_names] {name}: no single column is mapped to "
                              f"{name} in [input.columns] (mapped: {', '.join(columns)}), so "
                              "it has no name to give other names to")
        others = [others] if isinstance(others, str) else others
        if not isinstance(others, (list, tuple)) or not others or any(
                not isinstance(o, str) or not o.strip() for o in others):
            raise ConfigError(f"[input.other_names] {name} = {setting_text(others)}: expected "
                              f"a list of column names, e.g. {name} = [\"{mapped}_v2\"]")
        clash = [o for o in others if o in taken]
        if clash:
            raise ConfigError(f"[input.other_names] {name} = {setting_text(others)}: "
                              f"{clash[0]!r} is mapped or the time column already; another "
                              "name of one column cannot be the name of another")
        taken.update(others)
        checked[name] = tuple(others)
    return checked


def _own_names(path, raw: pd.DataFrame, header: list, columns: dict, other_names: dict,
               renamed_in: dict | None) -> tuple[pd.DataFrame, list]:
    """The file's columns under their mapped names where it writes another name of
    ``[input.other_names]``; a file holding both names, or two other names of one
    column, is refused (which of them is the variable?)."""
    renames = {}
    for name, others in other_names.items():
        mapped = columns[name]
        present = [o for o in (mapped, *others) if o in raw.columns]
        if len(present) > 1:
            raise InputFileError(
                f"input file {str(path)!r} holds {_names(present)}, which [input.other_names] "
                f"{name} gives as names of one column ({mapped!r}): which of them is {name}? "
                "map it in [input.columns] for this file alone, or remove the other names")
        if present and present[0] != mapped:
            renames[present[0]] = mapped
            if renamed_in is not None:
                renamed_in.setdefault((present[0], mapped), []).append(str(path))
    if not renames:
        return raw, header
    return raw.rename(columns=renames), [renames.get(h, h) for h in header]


def _check_accept_units(value) -> tuple:
    if not isinstance(value, (list, tuple)) or any(
            not isinstance(v, str) or v not in READER_VARIABLES for v in value):
        raise ConfigError(f"[input] accept_units = {setting_text(value)}: expected a list of canonical "
                          f"variables ({', '.join(READER_VARIABLES)}) whose values are kept as "
                          "declared although they look like a unit mix-up")
    return tuple(value)


#: Shortest span of a file's records judged alone [days] (our choice: two months, so that
#: one month of odd values, such as a pyranometer under snow, in a file of its own stays
#: the month-by-month warning it is in one file)
_FILE_CHECK_DAYS = 60.0
#: The words of :func:`fluxpart.unit_checks.mixup_messages`' month-by-month warnings
_CHANGED_WITHIN = "may have changed within the record"


def _file_mixups(converted: dict, units: dict, mapping: dict, interval_minutes: int,
                 potential, missing, starts, sources: np.ndarray, refusals: dict) -> dict:
    """Refusals of unit or sign mix-ups confined to one file of several.

    The whole-record checks see a file in another unit (kW m-2 for W m-2, uptake
    positive) diluted by the other files and the month-by-month checks only warn (a month
    holds fewer records to tell by); the records of one file alone are judged as a
    one-file record of that length would be, so a file of :data:`_FILE_CHECK_DAYS` or
    more that alone would be refused is refused, named. Run only where the months
    already look changed.
    """
    found: dict = {}
    order = list(dict.fromkeys(sources))
    if len(order) < 2:
        return found
    for source in order:
        rows = sources == source
        if (starts[rows][-1] - starts[rows][0]) < pd.Timedelta(days=_FILE_CHECK_DAYS):
            continue                        # a month of odd values stays a warning
        part = {name: values[rows] for name, values in converted.items()}
        alone, _ = mixup_messages(part, units, mapping, interval_minutes,
                                  None if potential is None else np.asarray(potential)[rows],
                                  missing, starts[rows])
        for name, message in alone.items():
            if name in refusals or name in found:
                continue
            found[name] = (f"the records of input file {source!r} alone are refused: "
                           f"{message} -- while those of the other {len(order) - 1} file(s) "
                           "are not: a unit or sign that changed between the files, which one "
                           "[input.units] setting cannot read; convert that file's column in a "
                           f"copy of it (or list {name} in [input] accept_units)")
    return found


_SUGGESTED_UNIT = re.compile(r'set \[input\.units\] (\w+) = "([^"]+)"')


def _other_unit(name: str, message: str) -> str | None:
    """The unit a refusal's fix (``set [input.units] vpd = "hPa"``) or a month warning
    ("look like a flux 22.7 times too small (mg CO2 m-2 s-1)") names for `name`."""
    suggested = _SUGGESTED_UNIT.search(message)
    if suggested is not None:
        return suggested.group(2) if suggested.group(1) == name else None
    named = [unit for unit in units_for(name) if f"({unit})" in message]
    return max(named, key=len) if named else None


def _relabelled_refusals(suspicions: list, refusals: dict, parts: list, mapping: dict,
                         units: dict, starts: pd.DatetimeIndex, sources) -> dict:
    """Refusals where the months that look like another unit are the files whose units
    line writes another unit (:mod:`fluxpart.unit_labels`); {} where none."""
    found = {}
    for warning in suspicions:
        name = _warned_variable(warning, mapping)
        if name is None or name in refusals or name in found:
            continue
        declared = units.get(name)
        relabelled = _relabelled(name, parts, units)
        message = relabelled_months_message(name, str(mapping[name]), warning,
                                            declared or units_for(name)[0], relabelled,
                                            starts, sources)
        if message:
            found[name] = message
    return found


def _relabelled(name: str, parts: list, units: dict) -> dict:
    """The input files whose units line writes another unit of `name` than it is read in
    (:func:`fluxpart.unit_labels.relabelled_files`)."""
    declared = units.get(name)
    read_key = (same_unit_key(name, declared) if declared is not None
                else ("unit", (1.0, 0.0), False))
    labels = [(part["source"], part["header_rows"].get(name, (None, ()))[1])
              for part in parts]
    return relabelled_files(name, labels, read_key)


def _warned_variable(warning: str, mapping: dict) -> str | None:
    """The variable of a month-by-month warning (``column 'x' (nee): in 7 month(s)``)."""
    if _CHANGED_WITHIN not in warning:
        return None
    found = re.match(r"column '[^']*' \((\w+)\): in \d+ month", warning)
    return found.group(1) if found and found.group(1) in mapping else None


def _unit_changed_within(name: str, message: str, values, converted: dict, units: dict,
                         mapping: dict, interval_minutes: int, potential, missing,
                         starts: pd.DatetimeIndex, sources: np.ndarray,
                         strict: bool = True) -> str | None:
    """A whole-record refusal's message where the unit changed within the record.

    A logger program or export that changed a column's unit part way through (VPD in
    kPa until June, hPa from July) is refused on the whole record with the unit of the
    later records as the fix ("set [input.units] vpd = \"hPa\""), which then refuses the
    earlier ones. Where the record splits, at a change of input file (or, for one file,
    at a month start), into two parts of :data:`_FILE_CHECK_DAYS` or more each that the
    checks tell apart affirmatively (each part passes in one of the two units and is
    refused in the other), the refusal names the split and the fix that reads both.

    Parameters
    ----------
    name : str
        The refused variable.
    message : str
        Its whole-record refusal, ending in the ``set [input.units]`` fix.
    values : numpy.ndarray
        Its values as written in the file (before unit conversion).
    converted, units, mapping, interval_minutes, potential, missing, starts
        As for :func:`fluxpart.unit_checks.mixup_messages` over the whole record.
    sources : numpy.ndarray
        Input file of each record.
    strict : bool
        Require each part to be refused in the other unit too (True: the whole record
        is refused and only the message changes). False for a month-by-month warning
        (a whole record that passes): one part passing as declared and the other,
        :data:`_FILE_CHECK_DAYS` or more, refused alone as declared and passing in the
        unit the months look like, is refused, as :func:`_file_mixups` refuses a file
        refused alone.

    Returns
    -------
    str or None
        The message naming the split, or None where no split is told apart (a record
        in one wrong unit throughout keeps its own message).

    References
    ----------
    The checks are those of :func:`fluxpart.unit_checks.mixup_messages`; requiring
    both parts to be told apart in both units keeps a part whose records cannot tell
    (a winter half with no bright, warm record) from being taken for a unit change.
    """
    other = _other_unit(name, message)
    if other is None:
        return None
    declared = units.get(name)
    order = list(dict.fromkeys(sources))
    by_file = 1 < len(order) <= 60
    if by_file:
        cuts = np.flatnonzero(sources[1:] != sources[:-1]) + 1
    else:
        months = starts.year * 12 + starts.month
        cuts = np.flatnonzero(np.diff(np.asarray(months)) != 0) + 1
    span = pd.Timedelta(days=_FILE_CHECK_DAYS)
    cuts = [int(c) for c in cuts
            if starts[c - 1] - starts[0] >= span and starts[-1] - starts[c] >= span]
    if not cuts or len(cuts) > 60:
        return None

    def refused(rows: slice, unit) -> bool:
        part = {key: array[rows] for key, array in converted.items()}
        part[name] = to_canonical(values[rows], name, unit, interval_minutes=interval_minutes)
        refusals, _ = mixup_messages(part, {**units, name: unit} if unit else
                                     {k: v for k, v in units.items() if k != name},
                                     mapping, interval_minutes,
                                     None if potential is None else np.asarray(potential)[rows],
                                     missing, starts[rows])
        return name in refusals

    def splits(other) -> list:
        found = []
        for cut in cuts:
            before, after = slice(0, cut), slice(cut, None)
            # earlier records right as declared, later ones in the suggested unit, each
            # told apart affirmatively (or the reverse order)
            for first, second in ((declared, other), (other, declared)):
                if (not refused(before, first) and not refused(after, second)
                        and (refused(after, first) if first == declared else
                             refused(before, second))
                        and (not strict or (refused(before, second)
                                            and refused(after, first)))):
                    found.append((cut, first, second))
                    break
        return found

    found = splits(other)
    if not found:
        return None
    # the jump of the values at the change measures the unit's factor (round mistakes41:
    # g C m-2 per record, 46 times smaller, was named as mg CO2, 22.7)
    head = message.split("; ")[0]
    # the day of the change, searched over every day from a month before the first cut
    # that splits to a month after the last (round mistakes50: the first cut may lie months
    # before the change; a cut a month before the change splits too, its later part mostly
    # in one unit): the day whose step best splits the days' scales about the
    # season's course (round splitfactor: the largest jump of two fortnights' 99th
    # percentiles took a fortnight holding three changed days for the change, VPD in hPa
    # from 12 May measured as 0.0455 from 1 May, "fits no unit")
    jump = change_point(values, starts, starts[found[0][0]] - pd.Timedelta(days=31),
                        starts[found[-1][0]] + pd.Timedelta(days=31))
    first_unit = (next((first for cut, first, _ in found if starts[cut] >= jump[1]),
                       found[-1][1]) if jump is not None else None)
    zero = np.array([0.0])
    if jump is not None and any(
            to_canonical(zero, name, unit, interval_minutes=interval_minutes)[0] != 0.0
            for unit in (declared, other)):
        # a unit with an offset (°F against °C) is no factor on the values: the day alone
        head += (f" (the values change from {jump[1]:%Y-%m-%d} on, the day that best splits "
                 "the days' scales into two steady parts)")
    elif jump is not None:
        measured = jump[0] if first_unit == declared else 1.0 / jump[0]
        factors = _unit_factors(name, declared, interval_minutes)
        fitted = unit_of_factor(measured, factors)
        refound = splits(fitted) if fitted not in (None, other) else []
        if refound:
            head = head.replace(f"{factors.get(other, 0.0):.3g} times too small ({other})",
                                f"{factors[fitted]:.3g} times too small ({fitted})")
            found, other = refound, fitted
        if other in factors:
            fit = (f"fits {other!r} ({factors[other]:.3g} times)" if fitted == other else
                   "fits no unit within a factor "
                   f"{UNIT_FIT:g}: " + " or ".join(f"{unit!r} ({factor:.3g} times)"
                                                     for unit, factor in factors.items()))
            head += (f" (the values jump by a factor {measured:.3g} from {jump[1]:%Y-%m-%d} on, "
                     "the day that best splits the days' scales into two steady parts, the "
                     f"factor from the same hours of the fortnights either side; which {fit})")
    cut, first, second = found[0]
    last = found[-1][0]
    canonical = VARIABLES[name].unit if name in VARIABLES else "its canonical unit"
    shown = [repr(unit if unit else canonical) for unit in (first, second)]
    where = (f"{starts[cut]:%Y-%m-%d %H:%M} (input file {sources[cut]!r})" if cut == last else
             f"{starts[cut]:%Y-%m-%d %H:%M} (input file {sources[cut]!r}) and "
             f"{starts[last]:%Y-%m-%d %H:%M} (input file {sources[last]!r})")
    at = "at" if cut == last else "between"
    if not by_file:
        # month starts are tried: the change may lie within the month before
        at = "at about" if cut == last else "between about"
        where += " (month starts tried: the change may lie up to a month from it)"
    told = ("each part refused in the other unit" if strict else
             "one part refused alone as declared, as a one-file record of its length "
             "would be")
    return (f"{head}; the records read right in two units, split "
            f"{at} {where}: those before in {shown[0]}, those after in {shown[1]} ({told}): "
            f"a unit that changed within the record (a logger "
            f"program or export changed), which one [input.units] setting cannot read; "
            f"convert column {mapping[name]!r} of one part in a copy of its file(s) (or list "
            f"{name} in [input] accept_units)")


def _unit_factors(name: str, declared, interval_minutes: int) -> dict:
    """Unit -> its values' ratio to the declared unit's for `name` (22.7 for mg CO2 m-2
    s-1 against µmol m-2 s-1; 46.3 for g C m-2 per 30-min record), the declared unit and
    its spellings left out."""
    one = np.array([1.0])
    base = to_canonical(one, name, declared, interval_minutes=interval_minutes)[0]
    factors = {}
    for unit in units_for(name):
        factor = float(to_canonical(one, name, unit, interval_minutes=interval_minutes)[0]
                       / base)
        if abs(factor - 1.0) > 1e-6 and not any(abs(factor - known) < 1e-6 * factor
                                                for known in factors.values()):
            factors[unit] = factor
    return factors


def _written_limit(converted: dict, texts: list) -> float | None:
    """The NEE value the reader named as values written as a limit (round mistakes34:
    :func:`fluxpart.nee_limits.written_as_limit`), or None: the most repeated non-zero
    value, the one its missing-code rule judged."""
    nee = converted.get("nee")
    if nee is None or not any(_WRITTEN_WORDS in text for text in texts):
        return None
    present = nee[np.isfinite(nee)]
    code, _ = most_repeated(present[present != 0.0])
    return float(code)


def _refuse_or_warn(name: str, message: str, accept_units: tuple, warnings: list,
                    preflight: list | None = None):
    """Warn for a variable in accept_units; else refuse (or, in a preflight, list it)."""
    if name in accept_units:
        warnings.append(message.split("; ")[0] + f"; kept as declared ([input] accept_units "
                        f"lists {name})")
        return name
    if preflight is None:
        raise ImplausibleValueError(message)
    preflight.append(message)
    warnings.append(message + " (run stops)")
    return None


# --------------------------------------------------------------------------- files


def _cannot_read(path: Path, error: OSError) -> str:
    """One line for an input file that exists but cannot be read.

    Python's own text of the error (``[Errno 13] Permission denied: 'tower.csv'``) named
    the file twice and the number meant for programs; now the system's reason alone
    (``strerror``) and, for a refused permission (EACCES, EPERM: open(2) (m)), the fix.

    Parameters
    ----------
    path : pathlib.Path
        The input file.
    error : OSError
        What reading it raised.

    Returns
    -------
    str
        The message, naming ``[input] path``'s file.

    References
    ----------
    POSIX ``open(2)``: EACCES where a permission of the file or of a folder on its path
    is refused (m).
    """
    return (f"input file {str(path)!r} cannot be read: {error.strerror or error}"
            f"{read_fault_remedy(error)}")


def _file_sha256(path: Path) -> str:
    """SHA-256 of an input file; a missing or unreadable file is an `InputFileError`."""
    _require_input_file(Path(path))
    try:
        return sha256_of_file(path)
    except OSError as error:
        raise InputFileError(_cannot_read(path, error)) from None


def _beside_link_target(config: Path, input_paths) -> None:
    """Name a linked site config's relative input that lies beside the link's target.

    Parameters
    ----------
    config : Path
        The site config as given.
    input_paths : sequence of Path
        Its ``[input] path`` files, resolved relative to the folder of `config`.

    Raises
    ------
    InputFileError
        Where `config` is a symbolic link (a shared config linked into each site's
        folder), an input file is missing beside the link, and the same relative name
        exists beside the link's target: the run said only "does not exist" of a file
        the user can see beside the config they wrote.

    References
    ----------
    POSIX ``symlink(7)`` / path resolution: a relative name in a file's content is
    resolved by the program reading it, here against the folder of the path as given
    (the link's), not the target's (m).
    """
    try:
        if not config.is_symlink():
            return
        target = config.resolve().parent
    except (OSError, RuntimeError):
        return
    for given in input_paths:
        try:
            if given.exists():
                continue
            relative = given.relative_to(config.parent)
            there = target / relative
            if not there.is_file():
                continue
        except (OSError, ValueError):
            continue
        raise InputFileError(
            f"[input] path: input file {str(given)!r} does not exist; the site config "
            f"{str(config)!r} is a symbolic link to {str(config.resolve())!r}, and relative "
            f"paths in it are read from the link's folder, not the target's: {str(there)!r} "
            "is there. Give that path in full in [input] path, or put a link to the input "
            "beside the site config's link too")


def _require_input_file(path: Path) -> None:
    """Raise `InputFileError` naming ``[input] path`` unless `path` is an existing file."""
    try:
        exists = path.exists()
    except OSError as error:    # a name beyond the file system's limit (ENAMETOOLONG)
        raise InputFileError(f"[input] path: input file {str(path)[:80]!r}... cannot be "
                             f"looked up: {error.strerror or error}") from None
    if not exists:
        broken = broken_link(path)
        if broken:
            raise InputFileError(f"[input] path: input file {str(path)!r} {broken}")
        hint = (other_system_path_hint(path) or _case_hint(path)
                or unicode_form_hint(path))
        raise InputFileError(f"[input] path: input file {str(path)!r} does not exist{hint}")
    if not path.is_file():
        raise InputFileError(f"[input] path: {str(path)!r} is not a file")


def broken_link(path: Path) -> str:
    """Why `path`, a symbolic link, leads to no file; empty where it is no link.

    A link whose target was moved or deleted (a dangling link), or one that leads back
    to itself (``ELOOP``), stands in its folder under the very name looked for: calling
    the file missing, and then naming the link as a file "differing only in case",
    sent the user looking for a file that is there.

    Parameters
    ----------
    path : pathlib.Path
        The path that does not lead to an existing file.

    Returns
    -------
    str
        A phrase to follow the path's name, or ``""``.

    References
    ----------
    Linux man-pages, symlink(7) and path_resolution(7): a dangling link and the
    ``ELOOP`` of a loop of links (m).
    """
    try:
        if not path.is_symlink():
            return ""
        target = os.readlink(path)
    except OSError:
        return ""
    try:
        path.stat()
    except OSError as error:
        if error.errno == errno.ELOOP:
            return (f"is a symbolic link (to {target!r}) that leads back to itself; fix or "
                    "remove the link, or give the file itself")
    return (f"is a symbolic link to {target!r}, which does not exist (moved or deleted?); "
            "point the link at the file again, or give the file itself")


def _too_large(path: Path) -> str:
    """The message for an input file larger than the memory the process may use.

    The reader holds the whole file; a file of gigabytes given as the input (a disk image,
    a logger's preallocated card file of zero bytes, a raw high-frequency file) ended in
    "ran out of memory ... give the process more memory", which named neither the file
    nor its size, and more memory would not make such a file a half-hourly table.

    References
    ----------
    Linux man-pages, truncate(1) and lseek(2): a sparse file reads as zero bytes where
    nothing was written (m).
    """
    try:
        size = path.stat().st_size
        with open(path, "rb") as handle:
            head = handle.read(1 << 16)
    except OSError:
        size, head = None, b""
    zeros = (" and begins with zero bytes only (NUL: a file created at its full size "
             "but never written, a preallocated logger card file?)"
             if head and not head.strip(b"\x00") else "")
    shown = f"{size / 1e9:.1f} GB" if size is not None else "too large"
    return (f"input file {str(path)!r} is {shown}{zeros}, more than this process can hold "
            "in memory (half-hourly records of a tower over decades take megabytes): check "
            "that [input] path names the tower's table, or give the process more memory")


def _line_count(path: Path) -> int | None:
    """The number of line breaks in the file `path`, read 1 MiB at a time (None where it
    cannot be read)."""
    count = 0
    try:
        with open(path, "rb") as handle:
            while block := handle.read(1 << 20):
                count += block.count(b"\n")
    except OSError:
        return None
    return count


#: What a file of records finer than a tower's is to become: said where memory ran out
#: reading it and where its samples show such records (:func:`_refuse_finer_records`).
_FINER_RECORDS = ("a year of half-hourly records takes 17,520 lines (hourly 8,760), so a "
                  "file of finer records (a logger's 1-minute or 10 Hz table) is to be "
                  "averaged to 30 or 60 minutes first")
#: Lines past which a file is sampled for finer records before it is parsed whole: ten
#: years of half-hourly records (175,200 lines). Past it a file of 1-minute records takes
#: tens of seconds and gigabytes to parse (faults39: 5.3 million lines, 2.6 GB, 37-82 s),
#: only to be refused for its spacing; below it the full parse names the spacing's lines.
SAMPLED_LINES = 175_200
#: Lines of each sample (the file's first, middle and last).
_SAMPLE_LINES = 200


def _sample_blocks(text: str, head_lines: int) -> tuple[str, list] | None:
    """The header part of `text` (its first `head_lines` lines) and three blocks of
    :data:`_SAMPLE_LINES` lines from its records: the first, the middle and the last."""
    start = 0
    for _ in range(head_lines):
        start = text.find("\n", start) + 1
        if not start:
            return None
    # the records' part is text[start:stop], its final line ends left out: positions in
    # `text`, not a copy of it (two copies of a ten-year file took 10 ms, round speed57)
    stop = len(text)
    while stop > start and text[stop - 1] == "\n":
        stop -= 1

    def lines_from(at: int) -> str:
        end = at
        for _ in range(_SAMPLE_LINES):
            end = text.find("\n", end, stop) + 1
            if not end:
                return text[at:stop]
        return text[at:end]

    middle = text.find("\n", start + (stop - start) // 2, stop) + 1 or start
    last = stop
    for _ in range(_SAMPLE_LINES):
        last = text.rfind("\n", start, last)
        if last < 0:
            last = start - 1
            break
    return text[:start], [lines_from(start), lines_from(middle), text[last + 1:stop]]


def _refuse_finer_records(path: Path, text: str, delimiter: str, rows_before_header: int,
                          rows_after_header: int, time_columns, time_format: str,
                          utc_offset, time_zone) -> None:
    """Refuse a file of more than :data:`SAMPLED_LINES` lines whose first, middle and
    last :data:`_SAMPLE_LINES` lines all step by a median under 30 minutes and whose
    lines are more than twice what 30-minute records of its span take.

    Raises
    ------
    SpacingError
        Naming the file, its size and lines, the samples' spacing and the span, with
        what a tower's records take (:data:`_FINER_RECORDS`).

    Notes
    -----
    Three samples of one spacing and twice the lines 30-minute records of the span
    allow leave no room for a file that is mostly 30- or 60-minute records. Any sample
    that does not read (a note line, another layout the full reader handles) leaves
    the file to the full parse, which names what it finds.
    """
    lines = text.count("\n")
    if lines <= SAMPLED_LINES:
        return
    sampled = _sample_blocks(text, rows_before_header + 1 + rows_after_header)
    if sampled is None:
        return
    head, blocks = sampled
    spans, steps = [], []
    try:
        for block in blocks:
            raw, rows, _, _ = _read_text(path, head + block, delimiter, rows_before_header,
                                         rows_after_header, [])
            stamps = parse_stamps(join_time_columns(raw, time_columns), time_format,
                                  time_columns=time_columns, source=str(path), lines=rows,
                                  utc_offset=utc_offset, time_zone=time_zone).stamps
            minutes = np.abs(np.diff(stamps.to_numpy("datetime64[s]").astype(np.int64))) / 60
            minutes = minutes[minutes > 0]
            if minutes.size < _SAMPLE_LINES // 2:
                return
            steps.append(float(np.median(minutes)))
            if steps[-1] >= min(INTERVALS_MINUTES):
                # a sample of tower records: the file is not refused, whatever the other
                # samples hold (a long half-hourly file decided by its first, round speed57)
                return
            spans += [stamps.min(), stamps.max()]
    except Exception:               # noqa: BLE001 - the full parse names what is wrong
        return
    first, last = min(spans), max(spans)
    if max(steps) >= min(INTERVALS_MINUTES) or \
            lines <= 2 * ((last - first) / pd.Timedelta(minutes=30) + 1):
        return
    size = path.stat().st_size
    step = ", ".join(dict.fromkeys(f"{v:g}" for v in steps))
    raise SpacingError(
        f"input file {str(path)!r} ({size / 1e6:,.0f} MB, {lines:,} lines) holds records "
        f"{step} minute(s) apart (a median of its first, middle and last {_SAMPLE_LINES} "
        f"lines, from {first:%Y-%m-%d %H:%M} to {last:%Y-%m-%d %H:%M}), refused before "
        f"it is parsed whole: {_FINER_RECORDS}")


def too_large_to_read(paths) -> str:
    """Why memory ran out while the input files `paths` were read: the largest named with
    its size [MB] and lines beside the lines a tower's records take.

    A file the reader could load but not parse (ten years of 1-minute records: 5.3
    million lines, 272 MB, 2.6 GB while parsed) ended in "ran out of memory ... give
    the process more memory", though more memory only led to its refusal as not 30- or
    60-minute records, after 80 s.

    References
    ----------
    A half-hourly record of a year holds 365 x 48 = 17,520 records (fact of the trade).
    """
    sized = []
    for path in map(Path, paths):
        try:
            sized.append((path.stat().st_size, path))
        except OSError:
            continue
    if not sized:
        return "ran out of memory reading the input"
    size, path = max(sized)
    lines = _line_count(path)
    counted = f", {lines:,} lines" if lines is not None else ""
    return (f"ran out of memory reading input file {str(path)!r} ({size / 1e6:,.0f} MB"
            f"{counted}): {_FINER_RECORDS}; for a tower's own 30- or 60-minute table, "
            "give the process more memory")


def _case_hint(path: Path) -> str:
    """A hint naming a file of the folder whose name differs from `path`'s only in case.

    Of several such files the first in sorted order is named, so the message does not
    depend on the order the folder lists its entries in.
    """
    try:
        same = sorted(p.name for p in path.parent.iterdir()
                      if p.name.lower() == path.name.lower() and p.name != path.name)
    except OSError:
        return ""
    return (f"; the folder has {same[0]!r}, which differs only in upper and lower case "
            "(file names are case-sensitive here)" if same else "")


#: Leading bytes of the single-file compressors a logger folder or an archive copy
#: holds (gzip RFC 1952, bzip2, xz (m)), and their modules.
_COMPRESSED = ((b"\x1f\x8b", "gzip", gzip), (b"BZh", "bzip2", bz2),
               (b"\xfd7zXZ\x00", "xz", lzma))
#: Compression layers taken off one file: a table compressed twice by accident (a portal
#: gzipping a download already gzipped) is read; more layers than that are no accident.
_COMPRESSION_LAYERS = 3


def _decompressed(data: bytes, path: Path, joined: list | None = None) -> bytes:
    """The bytes of a gzip-, bzip2- or xz-compressed file decompressed, else `data`.

    A compressed text table is the table: read it as the file it holds (by its leading
    bytes, whatever its name), its hash still the compressed file's; so is a zip
    archive of one file (:func:`fluxpart._validate.single_zip_member`, layouts36), and
    since layouts43 a tar archive of one (``.tar``, ``.tar.gz``: :func:`_tar_table`). A
    tar archive of several files is refused naming them, as are zip archives of several
    files. A file compressed twice (``.csv.gz.gz``, or a portal's gzip of a
    file already gzipped, or of a zip of one table) is the table too: up to
    :data:`_COMPRESSION_LAYERS` layers are taken off (layouts41; refused before as
    "gzip-compressed, not a text table" or "a zip archive holding 1 file(s)"). A tar
    archive of tables named as one series is read one after another
    (:func:`fluxpart._validate.joined_tar_tables`, layouts52), their names put in
    `joined` where given.
    """
    name = ""
    for _ in range(_COMPRESSION_LAYERS):
        if data.startswith(b"PK\x03\x04"):
            data = single_zip_member(data) or data
        if is_tar(data):
            data = _tar_table(data, path, name, joined)
        layer = next(((name, module) for magic, name, module in _COMPRESSED
                      if data.startswith(magic)
                      and (name != "bzip2" or data[4:10] == b"1AY&SY")), None)
        if layer is None:
            return data
        name, module = layer
        try:
            data = module.decompress(data)
        except (OSError, EOFError, ValueError, lzma.LZMAError) as error:
            raise InputFileError(
                f"input file {str(path)!r} is {name}-compressed but cannot be "
                f"decompressed ({error}): a copy cut short? Copy it again") from None
    return _tar_table(data, path, name, joined) if is_tar(data) else data


def _tar_table(data: bytes, path: Path, compressed: str, joined: list | None = None) -> bytes:
    """The one table of the tar archive `data` (:func:`fluxpart._validate.single_tar_member`;
    `compressed` names the compressor it came out of, "" for none), or its tables named
    as one series joined (their names added to `joined`, layouts52), else an
    InputFileError naming the files it holds (layouts43: a plain tar was refused for the
    zero bytes of its headers, a compressed one as an archive of files without naming
    them)."""
    table = single_tar_member(data)
    if table is not None:
        return table
    series = joined_tar_tables(data)
    if series is not None:
        if joined is not None:
            joined.extend(series[1])
        return series[0]
    kind = f"a {compressed}-compressed tar archive" if compressed else "a tar archive"
    files = tar_files(data)
    if files is None:
        raise InputFileError(f"[input] path: {str(path)!r} is {kind} that cannot be read "
                             "to its end: a copy cut short? Copy it again")
    shown = ", ".join(repr(member.name) for member in files[:3])
    more = f" and {len(files) - 3} more" if len(files) > 3 else ""
    other = tar_series_break(data)
    # one series of files whose first lines differ: name the file that breaks the layout,
    # as a zip's refusal does (layouts52)
    inner = (f" (read one after another where every file opens with the same line: "
             f"{other}; a changed header?)" if other else "")
    raise InputFileError(f"[input] path: {str(path)!r} is {kind} holding {len(files)} "
                         f"file(s) ({shown}{more}), not a text table; unpack it{inner} and "
                         "point [input] path at the text file(s)")


def _series_note(path: Path, archive: str, names: list) -> ReaderNote:
    """The reader note of an `archive` ("zip" or "tar") whose tables `names`, one
    series with the same first line, were read one after another."""
    return ReaderNote(
        f"input file {str(path)!r}: a {archive} archive of {len(names)} tables with the "
        f"same first line ({names[0]!r} to {names[-1]!r}), read one after another "
        "in the order of their names, digits as numbers (line numbers count the joined "
        "text)")


def _decode(path: Path, encoding, warnings=None, typed=None) -> tuple[str, str]:
    """Return the file's text and the encoding used (detected if `encoding` is None).

    A typed table (Parquet, Arrow, JSON Lines, a JSON array of records) is returned as
    the :class:`fluxpart.table_formats.TableText` of its records, made under `typed`
    (``wanted`` and ``clock`` of :func:`fluxpart.table_formats.table_text`).

    A block of zero bytes that ends the file (a logger's preallocated file, or a file
    whose length was written before its data when the power failed) is dropped with a
    warning in `warnings`, and so is a line it cut; zero bytes elsewhere are refused.
    """
    _require_input_file(path)
    try:
        data = path.read_bytes()
    except OSError as error:
        raise InputFileError(_cannot_read(path, error)) from None
    except MemoryError:
        raise InputFileError(_too_large(path)) from None
    owner = owner_file_message(path, len(data))
    if owner:
        raise InputFileError(owner)
    joined = joined_zip_tables(data) if data.startswith(b"PK\x03\x04") else None
    if joined is not None:
        # a zip of a day's or a month's file each, one header (layouts48; refused before
        # with "unpack it")
        data, names = joined
        if warnings is not None:
            warnings.append(_series_note(path, "zip", names))
    members = []
    data = _decompressed(data, path, members)
    if members and warnings is not None:
        # a tar of a day's or a month's file each, one header (layouts52; refused before
        # as "holding 12 file(s)")
        warnings.append(_series_note(path, "tar", members))
    typed = typed or {}
    kind = table_formats.binary_kind(data)
    if kind:
        return table_formats.table_text(data, path, kind, **typed), "utf-8"
    refuse_binary(data, path)
    # a byte-order mark names the encoding, also over [input] encoding: a file saved with
    # one among files of a declared single-byte encoding (read as such, its header would
    # begin with "ï»¿")
    declared = encoding
    if data.startswith(codecs.BOM_UTF8):
        encoding = "utf-8-sig"
    elif data.startswith((codecs.BOM_UTF32_LE, codecs.BOM_UTF32_BE)):
        # before UTF-16: the UTF-32 LE mark FF FE 00 00 begins with UTF-16 LE's FF FE
        encoding = "utf-32"
    elif data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        encoding = "utf-16"
    elif encoding is None:
        if len(data) >= 4 and data[1] == 0 and data[3] == 0 and data[0] != 0:
            encoding = "utf-16-le"
        elif len(data) >= 4 and data[0] == 0 and data[2] == 0 and data[1] != 0:
            encoding = "utf-16-be"
        else:
            encoding = "utf-8"
    try:
        text = data.decode(encoding)
    except UnicodeDecodeError as error:
        if encoding == "utf-8-sig" and _single_byte(declared):
            # a UTF-8 mark on a file of the declared single-byte encoding (a tool put it
            # before a Latin-1 file; layouts55: the advice to declare the encoding was
            # refused again, the mark ruling over it)
            text, encoding = _decoded_after_a_false_mark(data, declared, path, warnings), declared
        else:
            # the error's place is in its own bytes, past a UTF-8 mark (layouts55: the
            # byte named was the one three bytes before it); CR alone ends a line too
            # (layouts36: a CR-only file's byte was "on line 1")
            body, at = error.object, error.start
            line = len(re.findall(rb"\r\n|\r|\n", body[:at])) + 1
            raise InputFileError(
                f"input file {str(path)!r} {_not_text(encoding)} (byte 0x{body[at]:02x} on "
                f"line {line}); {_single_byte_advice(body, at)}") from None
    # the byte-order mark, also where files saved with one were joined end to end (a
    # header line starting with U+FEFF then is not the header line it repeats)
    text = text.replace("\ufeff", "")
    # the same mark of a UTF-8 file read once as Latin-1 or cp1252 and saved again as
    # UTF-8 ("\u00ef\u00bb\u00bf", the mark's three bytes as three characters; no
    # name or record starts with them): as the mark (layouts28: the time column was
    # not found, "did you mean 'ï»¿stamp'?")
    if "\u00ef\u00bb\u00bf" in text:
        text = re.sub("(?m)^\u00ef\u00bb\u00bf", "", text)
    # the end-of-file mark of CP/M and MS-DOS text files (Ctrl-Z, 0x1A; DOS `copy` and
    # old logger programs write it after the last line (m)) is no content: dropped as the
    # byte-order mark is (layouts25: it was dropped as "a record cut short or a footer",
    # a problem in `check`, and one written right after the last value cut that value)
    if text.rstrip("\r\n").endswith("\x1a"):
        text = text.rstrip("\r\n").rstrip("\x1a")
    text, pages = page_breaks.without_page_breaks(text)
    if pages and warnings is not None:
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: {pages} line(s) opened by a page break (form feed, "
            "U+000C, a paged export's) read without it"))
    text, formulas = formula_cells.without_text_formulas(text)
    if formulas and warnings is not None:
        # cells ="0.329", a spreadsheet's text formula (layouts52; every stamp failed to
        # parse before, "does not match time_format")
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: {formulas} line(s) hold cells written as a "
            "spreadsheet's text formula (=\"...\"), read as the text between the quotes"))
    nul = text.find("\x00")
    if nul >= 0 and warnings is not None and not text[nul:].strip("\x00"):
        text = _drop_zero_tail(path, text, nul, warnings)
        nul = -1
    cleaned = zero_runs.without_zero_runs(text) if nul >= 0 and warnings is not None else None
    if cleaned is not None:
        # the logger wrote on after a power cut's zeros (layouts50; refused before, naming
        # the line and asking for an edited copy)
        text, cut = cleaned
        warnings.append(
            f"input file {str(path)!r}: {len(cut)} run(s) of zero bytes (NUL) between the "
            "records, where a logger wrote on after a power cut: "
            + "; ".join(f"line {line} cut ({_shown_line(record)!r})" if record else
                        f"line {line}" for line, record in cut)
            + "; the cut record(s) dropped and the records after the zeros read")
        nul = -1
    if nul >= 0 and text.count("\x00") >= len(text) / 4:
        raise InputFileError(f"input file {str(path)!r} is read as {encoding} but every other "
                             "byte is zero, as in UTF-16 text: set [input] encoding = "
                             "\"utf-16\" (or leave encoding out to detect it)")
    if nul >= 0:
        # a power cut or a damaged memory card leaves a block of zero bytes where the
        # logger was writing; shown as a stamp or cell they filled the message with \x00
        raise InputFileError(
            f"input file {str(path)!r}: line {text.count(chr(10), 0, nul) + 1} holds zero "
            f"bytes (NUL; {text.count(chr(0))} in the file), which no text table has: a write "
            "cut short by a power failure or a damaged memory card leaves them; delete them, "
            "and the record they damaged, in a copy of the file")
    kind = table_formats.json_kind(text)
    if kind:
        text = table_formats.table_text(text, path, kind, **typed)
    return text, ("utf-8" if encoding == "utf-8-sig" else encoding)


def _not_text(encoding: str) -> str:
    """"is not ENCODING text", Python's "utf-8-sig" (the codec of a file that begins with a
    UTF-8 byte-order mark) said in words (round review96: "is not utf-8-sig text", the
    codec's name the message's only word for the mark)."""
    if encoding == "utf-8-sig":
        return "begins with a UTF-8 byte-order mark but is not UTF-8 text"
    return f"is not {encoding} text"


def _single_byte(encoding) -> bool:
    """Whether `encoding` names a codec other than a UTF one (Latin-1, cp1252, ...)."""
    try:
        return bool(encoding) and not codecs.lookup(encoding).name.startswith("utf")
    except LookupError:
        return False


def _decoded_after_a_false_mark(data: bytes, declared: str, path: Path, warnings) -> str:
    """The text of `data` after its UTF-8 byte-order mark, read as the `declared`
    [input] encoding, where the bytes after the mark are no UTF-8 (noted in
    `warnings`); refused naming the byte where the declared encoding cannot read them
    either."""
    body = data[len(codecs.BOM_UTF8):]
    try:
        text = body.decode(declared)
    except UnicodeDecodeError as error:
        line = len(re.findall(rb"\r\n|\r|\n", body[:error.start])) + 1
        raise InputFileError(
            f"input file {str(path)!r} begins with a UTF-8 byte-order mark but is not UTF-8 "
            f"text, nor {declared} text as [input] encoding says (byte "
            f"0x{body[error.start]:02x} on line {line}); save it again in one encoding "
            "and set [input] encoding to it") from None
    if warnings is not None:
        warnings.append(ReaderNote(
            f"input file {str(path)!r} begins with a UTF-8 byte-order mark, but its bytes "
            f"are no UTF-8 text: read as {declared}, as [input] encoding says, without "
            "the mark"))
    return text


#: Single-byte encodings a logger's or a PC program's text file is written in: ISO
#: 8859-1, Windows' Western European code page, and classic Mac OS's (Python codecs
#: "latin-1", "cp1252", "mac_roman"; each maps the bytes 0x80-0xFF otherwise: 0xB5 is
#: "µ" in the first two and "µ" too in Mac OS Roman, 0xB0 "°" in them and "∞" in Mac OS
#: Roman, whose "°" is 0xA1 (Unicode mapping tables of the code pages (m)).
_SINGLE_BYTE = ("latin-1", "cp1252", "mac_roman")


def _single_byte_advice(data: bytes, start: int) -> str:
    """The [input] encoding to set for a byte that is no UTF-8, with the word holding it as
    each single-byte encoding reads it (so that the user sees which one writes the
    file's "°C" or "µmol"). Mac OS Roman is named first where every line ends in CR alone
    (classic Mac OS's line end), else Latin-1 (layouts36 left it unnamed)."""
    cut = re.compile(rb"[\s,;\t\"]")
    before = [m.end() for m in cut.finditer(data, max(0, start - 40), start)]
    after = cut.search(data, start, start + 40)
    word = data[before[-1] if before else max(0, start - 40):
                after.start() if after else start + 40]
    readings = {name: word.decode(name, errors="replace") for name in _SINGLE_BYTE}
    order = list(_SINGLE_BYTE)
    if b"\r" in data and b"\n" not in data:
        order = ["mac_roman", "latin-1", "cp1252"]
    same = {}
    for name in order:
        same.setdefault(readings[name], []).append(repr(name))
    shown = "; ".join(f"as {' and '.join(names)} it reads {word!r}"
                      for word, names in same.items())
    mac = (" (its lines end in CR alone, as classic Mac OS writes them)"
           if order[0] == "mac_roman" else "")
    line_start = max(data.rfind(b"\n", 0, start), data.rfind(b"\r", 0, start)) + 1
    line_end = re.compile(rb"[\r\n]").search(data, start)
    line = data[line_start:line_end.start() if line_end else len(data)][:2000]
    east_asian = double_byte_readings(line)
    if east_asian and len(re.sub(rb"[\x00-\x7f]", b"", line)) >= 4:
        # names written in a Chinese or Korean locale's encoding (layouts49: refused
        # naming Latin-1 only, whose reading of "时间" is "Ê±¼ä")
        named = "; ".join(f"as {name!r} it reads {text!r}" for name, text in
                          east_asian.items())
        return ("its bytes outside ASCII there come in pairs, as Chinese and Korean "
                f"legacy encodings write them: set [input] encoding = "
                f"\"{next(iter(east_asian))}\" (or another) to the encoding it was written "
                f"in: {named}; as single bytes, {shown}")
    return (f"set [input] encoding = \"{order[0]}\"{mac} (or \"{order[1]}\", \"{order[2]}\", "
            f"or \"utf-16\") to the encoding it was written in: {shown}")


def _drop_zero_tail(path: Path, text: str, nul: int, warnings: list) -> str:
    """The text before a block of zero bytes that ends the file, and the line it cut.

    Zero bytes fill the end of a file whose length reached the card before its data (a
    power cut or a card pulled while the logger wrote) or that the logger preallocated:
    the lines before them are whole, a line they begin inside is cut and dropped.
    """
    zeros = len(text) - nul
    if not text[:nul].strip():
        raise _EmptyFileError(
            f"input file {str(path)!r} holds only zero bytes (NUL; {zeros}), a file created "
            "but never written (a power cut or a card pulled while the logger wrote); "
            "expected a header line and records", "holds only zero bytes")
    start = max(text.rfind("\n", 0, nul), text.rfind("\r", 0, nul)) + 1
    kept = text[:start]
    line = kept.count("\n") + 1 if "\n" in kept else kept.count("\r") + 1
    cut = text[start:nul].strip()
    warnings.append(
        f"input file {str(path)!r} ends in {zeros} zero bytes (NUL) from line {line} on "
        "(a file preallocated by the logger, or its length written before its data when "
        "the power failed)" + (f", which cut line {line} ({_shown_line(cut)!r}): that "
                               "record was dropped" if cut else "") + "; read up to them")
    return kept


class _EmptyFileError(InputFileError):
    """An input file without records (0 bytes, blank, or a header only).

    ``what`` says which, for the warning when the file is one of several and skipped.
    """

    def __init__(self, message: str, what: str):
        super().__init__(message)
        self.what = what


def _read_text(path: Path, text: str, delimiter: str, rows_before_header: int,
               rows_after_header: int, warnings=None
               ) -> tuple[pd.DataFrame, np.ndarray, list, int]:
    """Every cell as text; return the non-blank rows, their line numbers, the header and
    the empty trailing names of a header closed by a delimiter the data lines lack.

    A line with fewer fields than the header is a record cut short, its last value
    possibly cut mid-number ("12.5" written as "1"): as the file's last line (a
    logger stopped mid-write, a power cut) it is dropped with a note in `warnings`;
    elsewhere it is an error naming the line. A line with more fields is an error, unless
    the extra fields are empty (a delimiter closing every data line). Empty names ending
    the header (a delimiter closing the header line) are not counted: data lines
    without that delimiter are complete, and the empty column is left out.
    """
    markup = markup_message(text, path, rows_before_header)
    if markup:
        raise InputFileError(markup)
    _refuse_wide_header(path, text, delimiter, rows_before_header)
    if text[:4096].count('"') >= 4:
        wrapped = wrapped_lines_message(text[:65536].splitlines(), delimiter,
                                        rows_before_header,
                                        rows_before_header + rows_after_header + 1)
        if wrapped:
            raise InputFileError(f"input file {str(path)!r}: {wrapped}")
    skipped = set(range(rows_before_header)) | set(
        range(rows_before_header + 1, rows_before_header + 1 + rows_after_header))
    options = {"dtype": str, "keep_default_na": False, "na_filter": False}
    if text[:4096].count("'") >= 4 and single_quoted(
            text[:65536].splitlines(), delimiter, rows_before_header,
            rows_before_header + rows_after_header + 1):
        options["quotechar"] = "'"
        note = (f"input file {str(path)!r}: every cell of the header and of the first "
                "records is wrapped in single quotes ('...'), no CSV quotes: read with ' as "
                "the quote character")
        if warnings is not None and note not in warnings:     # once where read again
            warnings.append(ReaderNote(note))
    quote = options.get("quotechar", '"')
    if delimiter == " " and "  " in next(
            iter(text.splitlines()[rows_before_header:rows_before_header + 1]), "").strip():
        # each space a delimiter: the padding of aligned columns becomes empty columns
        raise InputFileError(
            f"input file {str(path)!r}: the header (line {rows_before_header + 1}) separates "
            "its names by runs of spaces, which [input] delimiter = \" \" reads as empty "
            "columns: set [input] delimiter = \"whitespace\"")
    following = leading_lines(text, rows_before_header + 2)[rows_before_header:]
    reader = csv.reader(iter(following), delimiter=delimiter if delimiter != _WHITESPACE
                        else " ")
    next(reader, None)
    if rows_after_header and reader.line_num > 1:
        # a quoted name holding a line break (spreadsheets allow one in a cell): the
        # header runs on over the next line, which rows_after_header would skip
        raise InputFileError(
            f"input file {str(path)!r}: the header (line {rows_before_header + 1}: "
            f"{_shown_line(following[0])!r}) opens a quoted name that goes on to the next "
            "line (a line break within a header cell), so the lines of [input] "
            "rows_after_header cannot be counted under it; remove the line break from the "
            "name in a copy of the file")
    if delimiter == _WHITESPACE:
        options["sep"] = r"\s+"
    else:
        options["sep"] = delimiter
    # the skipped lines emptied: a quote in a title or units line (3" for inches) would
    # otherwise open a value the parser reads on through the records
    parsed = _lf_line_ends(_emptied_lines(text, skipped))
    try:
        raw = pd.read_csv(_io.StringIO(parsed), skip_blank_lines=False,
                          skiprows=skipped, **options)     # a set: no Python call per line
        header = pd.read_csv(_io.StringIO(_header_text(parsed, rows_before_header)),
                             header=None, nrows=1, skiprows=rows_before_header,
                             **options).iloc[0].tolist()
    except pd.errors.EmptyDataError:
        raise _EmptyFileError(f"input file {str(path)!r} is empty; expected a header line "
                              "and records" + (f" after {rows_before_header} line(s) "
                                               "(rows_before_header)"
                                               if rows_before_header else ""),
                              "is empty" if not text else "holds only blank lines") from None
    except pd.errors.ParserError as error:
        if "EOF inside string" not in str(error):
            # a header line of a changed logger program holds more fields than the first
            _refuse_repeated_header(path, text, rows_before_header, rows_after_header,
                                    delimiter)
            header_line = next(iter(text.splitlines()[rows_before_header:]), "")
            found = re.search(r"Expected (\d+) fields in line (\d+), saw", str(error))
            closed = found and _closed_from(text, int(found.group(2)), int(found.group(1)),
                                            delimiter,
                                            rows_before_header + rows_after_header + 2)
            if closed:
                closed = f"input file {str(path)!r}: {closed}"
                # every line from there on ends with the delimiter, the field after it
                # empty: a delimiter closing each line (an export setting changed), which
                # is read as no column where the whole file has it (layouts34: "a logger
                # program that added a column")
                if warnings is None:
                    raise InputFileError(closed) from None
                warnings.append(ReaderNote(closed.replace("; delete it in a copy of the file",
                                                          ": read as no column")))
                lines = text.splitlines(keepends=True)
                start = int(found.group(2)) - 1
                cut = [re.sub(re.escape(delimiter) + r"(\r\n|\r|\n)?$", r"\1", line)
                       for line in lines[start:]]
                return _read_text(path, "".join(lines[:start] + cut), delimiter,
                                  rows_before_header, rows_after_header, warnings)
            # a header of one cell holding another separator is a delimiter setting's
            # matter (_parser_message), not a layout changed mid-file
            changed = (found and (delimiter == _WHITESPACE or delimiter in header_line)
                       and _changed_layout(path, text.splitlines(), int(found.group(2)),
                                           int(found.group(1)), delimiter,
                                           rows_before_header + rows_after_header + 2))
            raise InputFileError(changed or _parser_message(path, delimiter, str(error),
                                                            header_line, text)) from None
        # a quote opened and never closed: the parser names no line of the file
        text_lines = text.splitlines()
        number = _unclosed_quote_line(parsed.splitlines(), quote)
        shown = _shown_line(text_lines[number])
        if any(line.strip() for line in text_lines[number + 1:]) or warnings is None \
                or number <= rows_before_header + rows_after_header + 1:
            raise InputFileError(
                f"input file {str(path)!r}: line {number + 1} ({shown!r}) opens a quote ({quote}) "
                "that no later line closes, so the parser would read the rest of the file "
                "as one value; close or delete the quote in a copy of the file") from None
        # the last line, cut inside a quoted value (a logger stopped mid-write)
        warnings.append(f"input file {str(path)!r}: its last line ({number + 1}: {shown!r}) "
                        "ends inside a quoted value, a record cut short (a logger stopped "
                        "mid-write): dropped")
        return _read_text(path, "\n".join(text_lines[:number]) + "\n", delimiter,
                          rows_before_header, rows_after_header, warnings)
    if quote == "'" and raw.apply(
            lambda cells: cells.str.contains("\n", regex=False)).to_numpy().any():
        at = line_opening_quote(text.splitlines(), delimiter,
                                rows_before_header + rows_after_header + 1)
        where = (f"line {at + 1} ({_shown_line(text.splitlines()[at])!r})" if at >= 0
                 else "a record line")
        raise InputFileError(
            f"input file {str(path)!r}: {where} opens a single quote (') "
            "that the line does not close; the file is read with single quotes as its "
            "quote character (every cell of the header and the first records is wrapped "
            "in them), so the lines up to the next apostrophe would be read as one value: "
            "close or delete that quote in a copy of the file")
    if quote == '"' and '"' in parsed and raw.apply(
            lambda cells: cells.str.contains("\n", regex=False)).to_numpy().any():
        at = line_swallowing_records(text.splitlines(), delimiter,
                                     rows_before_header + rows_after_header + 1, len(header))
        if at >= 0:
            raise InputFileError(
                f"input file {str(path)!r}: line {at + 1} ({_shown_line(text.splitlines()[at])!r}) "
                "opens a quote (\") that a later line closes, so the records between would "
                "be read as one value and lost; close or delete the quote in a copy of the "
                "file (a quoted value may hold line breaks only where no line within it is "
                "a record)")
    first_line = rows_before_header + rows_after_header + 2 + _header_breaks(
        text, rows_before_header, delimiter)
    raw = _trailing_fields(path, raw, first_line, delimiter, *_header_and_first(
        text, rows_before_header, first_line, delimiter))
    blank = _blank_rows(raw)
    lines = _record_lines(text, first_line, len(raw), delimiter)
    raw = raw.loc[~blank].reset_index(drop=True)
    lines = lines[~blank]
    _refuse_repeated_header(path, text, rows_before_header, rows_after_header, delimiter)
    named = _named_width(header)
    raw, lines = _drop_cut_last_line(path, text, raw, lines, delimiter, warnings, named)
    raw, lines = _drop_cut_last_value(path, text, raw, lines, warnings, named)
    unnamed_surplus = 0
    if named < raw.shape[1] and (raw.iloc[:, named:] == "").all(axis=None):
        # the header closed by a delimiter (an empty last name): the empty column goes;
        # noted where the data lines lack that delimiter (else both lines end alike)
        text_lines = text.splitlines()
        if len(lines) and _field_count(text_lines[lines[0] - 1], delimiter) == named:
            unnamed_surplus = raw.shape[1] - named
        raw = raw.iloc[:, :named]
        header = header[:named]
    if raw.empty:
        _refuse_unicode_line_ends(path, text)
        skipped_after = (f" after the {rows_after_header} line(s) of rows_after_header"
                         if rows_after_header else "")
        raise _EmptyFileError(f"input file {str(path)!r} has a header but no records"
                              f"{skipped_after}", "has a header but no records")
    # header cells padded with spaces ("a, b, c", fixed-width exports) name the same columns
    raw.columns = [str(c).strip() for c in raw.columns]
    return raw, lines, [str(h).strip() for h in header], unnamed_surplus


#: More fields than a header line of any table holds: a spreadsheet has at most 16,384
#: columns (Excel's specification and limits since Excel 2007 (m)), eddy-covariance
#: programs' full outputs a few hundred
_MAX_HEADER_FIELDS = 16384


def _bracketed_unit_names(path: Path, text: str, rows_before_header: int,
                          rows_after_header: int, warnings) -> str:
    """`text` with a whitespace-delimited header whose bracketed units hold blanks
    ("co2_net [umol m-2 s-1]") written as one word a name (their blanks as
    :data:`fluxpart.bracket_names.PLACEHOLDER`, restored once parsed), where only that
    split gives one name a field of the first record (:mod:`fluxpart.bracket_names`;
    layouts40: refused before as a header of more names than the records hold)."""
    text_lines = text.splitlines(keepends=True)
    at = rows_before_header
    record = next((line for line in text_lines[at + 1 + rows_after_header:]
                   if line.strip()), None)
    if at >= len(text_lines) or record is None:
        return text
    names = bracket_names.bracket_names(text_lines[at], record)
    if names is None:
        return text
    if warnings is not None:
        # whole names, four at most (review55: cut at 160 characters, a name was cut too)
        joined = [name for name in names if " " in name]
        more = f" and {len(joined) - 4} more" if len(joined) > 4 else ""
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: the header (line {at + 1}) read as {len(names)} "
            "names split at the blanks outside their bracketed units ("
            + ", ".join(repr(name) for name in joined[:4]) + f"{more}), one a field"))
    ending = text_lines[at][len(text_lines[at].rstrip("\r\n")):]
    text_lines[at] = bracket_names.placeholder_line(names) + ending
    return "".join(text_lines)


def _refuse_unicode_line_ends(path: Path, text: str) -> None:
    """Raise where the lines end in Unicode's NEXT LINE or LINE/PARAGRAPH SEPARATOR (a
    mainframe's EBCDIC newline converted, a word processor's line break; Unicode Standard,
    section 5.8 (m)) and in no line break, which the table parser takes for one line
    (layouts31: named "a header but no records", or a header too wide)."""
    inner = text.rstrip("\r\n")
    if "\n" in inner or "\r" in inner:
        return
    count, mark = max((text.count(mark), mark) for mark in ("\x85", "\u2028", "\u2029"))
    if count >= 2:
        raise InputFileError(
            f"input file {str(path)!r}: its {count} lines end in U+{ord(mark):04X} "
            f"{unicodedata.name(mark, 'NEXT LINE')}, not in a line break (LF or CRLF), so "
            "it reads as one line: convert the line ends to LF in a copy of the file")


def _refuse_wide_header(path: Path, text: str, delimiter: str, rows_before_header: int
                        ) -> None:
    """Raise where the header line holds more fields than any table has columns.

    A file whose line breaks were lost (a copy or a conversion that dropped them, a
    program writing records without one) is one line of every record's fields: read
    as a header of that many names it took pandas minutes to build a frame of as many
    columns and was then refused as "a header but no records" (layouts28: 4 min 45 s
    for a year of half-hours, 157,690 fields). Delimiters inside quotes are counted
    too, which only overcounts a header that is far too wide already.
    """
    # universal newlines: CR-only and CRLF files alike (a CR-only file is no one line);
    # the lines up to the header only, the whole text where it is refused
    lines = _io.StringIO(universal_head(text, rows_before_header + 1), newline=None)
    for _ in range(rows_before_header):
        lines.readline()
    line = lines.readline().rstrip("\n")
    if len(line) <= _MAX_HEADER_FIELDS:
        return
    fields = len(line.split()) if delimiter == _WHITESPACE else line.count(delimiter) + 1
    if fields <= _MAX_HEADER_FIELDS:
        return
    lines = _io.StringIO(text, newline=None)
    for _ in range(rows_before_header + 1):
        lines.readline()
    rest = sum(1 for later in lines if later.strip())
    _refuse_unicode_line_ends(path, text)
    raise InputFileError(
        f"input file {str(path)!r}: its header (line {rows_before_header + 1}) holds "
        f"{fields:,} fields, more than any table has columns (a spreadsheet holds at most "
        f"16,384), and {rest} line(s) follow it: records written on one line (line breaks "
        "lost in a copy or a conversion?), or another delimiter than [input] delimiter; "
        "write one record per line in a copy of the file")


def _refuse_repeated_header(path: Path, text: str, rows_before_header: int,
                            rows_after_header: int, delimiter: str = ",") -> None:
    """Raise where the header line repeats among the records: a logger restarted its
    program and wrote its title, header and units lines again, or files were joined end
    to end. Named before the lines around it (a title of one field reads as a record
    cut short)."""
    first_data = rows_before_header + rows_after_header + 1
    # the lines down to the first record's; the whole text split only where the header
    # occurs again (round speed53: a whole split took 14 ms of a ten-year file)
    head = leading_lines(text, first_data)
    if rows_before_header >= len(head):
        return
    header_line = head[rows_before_header].strip()
    if not header_line:
        return
    if text.count(header_line) < 2:                       # one C pass; most files stop here
        _refuse_other_header(path, text, head, rows_before_header, first_data)
        _refuse_repeated_units(path, text, head, rows_before_header, first_data)
        return
    text_lines = text.splitlines()
    again = next((number for number, line in enumerate(text_lines[first_data:], first_data)
                  if line.strip() == header_line), None)
    if again is None:
        _refuse_other_header(path, text, text_lines, rows_before_header, first_data)
        return
    around = ("; the title and units lines around it too" if rows_before_header
              or rows_after_header else "")
    repeats = [number for number, line in enumerate(text_lines[again:], again)
               if line.strip() == header_line]
    gaps = np.diff([rows_before_header] + repeats)
    if len(repeats) >= 3 and int(gaps.max()) - int(gaps.min()) <= 3:
        # the header every so many lines (pages of a printout, a logger's screen pages;
        # layouts31: named as one restart or one join)
        raise InputFileError(
            f"input file {str(path)!r}: the header line repeats {len(repeats)} times, every "
            f"{int(gaps.min())} lines or so from line {again + 1} on (pages of a printout, "
            "or a logger writing its header every day?): in a copy of the file, keep the "
            "first header and "
            f"remove the repeated ones{around} and any page lines between the records")
    changed = interleaved_lines.changed_units(text_lines, rows_before_header, again,
                                              rows_after_header, delimiter)
    if changed:
        # the lines under it name other units (a firmware update changed a column's
        # unit): removing the repeated block, as for a restart, would read the values
        # after it in the first unit (layouts40)
        shown = "; ".join(f"{name!r}: {a!r} under the header of line "
                          f"{rows_before_header + 1}, {b!r} under line {again + 1}"
                          for name, a, b in changed[:4])
        raise InputFileError(
            f"input file {str(path)!r}: line {again + 1} repeats the header line with other "
            f"lines under it ({shown}; a logger program or firmware changed a unit?): the "
            "records after it are written in the later unit; split the file there and "
            "list the parts in [input] path (the unit each part writes is then checked "
            "against [input.units]), or convert those records in a copy of the file")
    raise InputFileError(
        f"input file {str(path)!r}: line {again + 1} repeats the header line (a logger "
        "program restarted, or files joined end to end?): in a copy of the file, remove it"
        f"{around}, or split the file there and list the parts in [input] path")


def _refuse_repeated_units(path: Path, text: str, text_lines: list, header_at: int,
                           first_data: int) -> None:
    """Raise where a line skipped under the header (a units or processing line) repeats
    among the records without the header: a logger that writes its units line again
    after a restart. Read on, it is "a stamp that does not parse", naming no cause.
    `text_lines`: the text's lines, at least down to line `first_data` (not included)."""
    for number in range(header_at + 1, min(first_data, len(text_lines))):
        line = text_lines[number].strip()
        if not any(ch.isalpha() for ch in line) or text.count(line) < 2:
            continue                        # an empty units line (",,,,") reads as blank
        again = next((k for k, other in enumerate(text.splitlines()[first_data:], first_data)
                      if other.strip() == line), None)
        if again is not None:
            raise InputFileError(
                f"input file {str(path)!r}: line {again + 1} repeats line {number + 1}, a "
                "line of [input] rows_after_header under the header (a units line written "
                "again after a logger restart?): remove it in a copy of the file, or split "
                "the file there and list the parts in [input] path")


def _refuse_other_header(path: Path, text: str, text_lines: list, header_at: int,
                         first_data: int) -> None:
    """Raise where a header line of other names or another order stands among the
    records: a logger program changed (a column added, renamed or moved) and wrote its
    new header. Read on, its line is "a record with a stamp that does not parse" or "a
    record with too many fields", naming no cause. Found by the header's longest name
    occurring again (one C pass) in a line holding at least half of the header's names.
    `text_lines`: the text's lines, at least down to line `first_data` (not included).
    """
    header_line = text_lines[header_at]
    ordered = [cell.strip().strip('"').strip().casefold()
               for cell in re.split(r'[,;\t ]', header_line)]
    names = set(ordered)
    names.discard("")
    if len(names) < 2:
        return
    longest = max(names, key=len)
    # names compared without case: a header written again in capitals (a database
    # export's) is the same header
    folded = text.casefold()
    if len(longest) < 3 or folded.count(longest) < 2:
        return
    for number, line in enumerate(folded.splitlines()[first_data:], first_data):
        if longest not in line:
            continue
        line_ordered = [cell.strip().strip('"').strip()
                        for cell in re.split(r'[,;\t ]', line)]
        cells = set(line_ordered)
        tail = len(ordered)
        if (len(line_ordered) > tail and line_ordered[-tail + 1:] == ordered[1:]
                and line_ordered[-tail] != ordered[0]
                and line_ordered[-tail].endswith(ordered[0])):
            # a record and a header line on one line: files joined end to end where the
            # first did not end with a line break (layouts31: named "a header line with
            # other names")
            joined = re.split(r"[,;\t ]", text.splitlines()[number])[-tail].strip()
            raise InputFileError(
                f"input file {str(path)!r}: line {number + 1} holds a record run together "
                f"with a header line (its field {joined!r}"
                "): files joined end to end where the first did not end with a line break? "
                "In a copy of the file, break the line before the header's first name and "
                "remove the header, or split the file there and list the parts in [input] "
                "path")
        if line_ordered == ordered:
            raise InputFileError(
                f"input file {str(path)!r}: line {number + 1} repeats the header line "
                "(quoted or in another case; a logger program restarted, or files joined "
                "end to end?): in a copy of the file, remove it, or split the file there "
                "and list the parts in [input] path")
        if len(cells & names) * 2 >= len(names):
            raise InputFileError(
                f"input file {str(path)!r}: line {number + 1} is a header line with other "
                f"names or another order than the header of line {header_at + 1} (a "
                "logger program changed and wrote its new header?): split the file there "
                "and list the parts in [input] path (each part is read by its own header)")
        return


def _named_width(header: list) -> int:
    """Fields of the header up to its last non-empty name.

    A header line ending in a delimiter has an empty last name; data lines with that
    many fields fewer are complete records, not lines cut short.
    """
    names = [str(name).strip() for name in header]
    while len(names) > 1 and names[-1] == "":
        names.pop()
    return len(names)


def _trailing_fields(path: Path, raw: pd.DataFrame, first_line: int,
                     delimiter: str = ",", header_line: str = "",
                     data_line: str = "") -> pd.DataFrame:
    """Undo the parser's row index taken from data lines with more fields than the header.

    When the first data line has k fields more than the header, the parser reads the
    first k fields of every line as a row index and shifts every value one or more
    columns to the right. Empty extra fields are a delimiter at the end of each data line
    (a common export): the values are put back under their names. Extra fields that hold
    values are an error naming the first such line (the header lacks a name).
    """
    if isinstance(raw.index, pd.RangeIndex):
        return raw
    extra = raw.index.nlevels
    cells = [raw.index.get_level_values(level).to_numpy(dtype=object)
             for level in range(extra)] + [raw[column].to_numpy(dtype=object)
                                            for column in raw.columns]
    width = len(raw.columns)
    spare = pd.DataFrame({i: cells[width + i] for i in range(extra)})
    filled = np.flatnonzero((spare.apply(lambda c: c.str.strip() != "")).any(axis=1))
    if filled.size:
        separator = next((c for c in (";", "\t", "|") if c in str(raw.columns[0])), None)
        names = str(raw.columns[0]).split(separator) if separator else []
        if (width == 1 and separator and len(names) == width + extra and not any(
                separator in str(cell) for column in cells for cell in column[:1000])):
            # the header in one delimiter, the data lines in the file's own: no data cell
            # holds the header's separator, and the header holds as many names as a data
            # line fields (a header typed or copied from another file; layouts31: the fix
            # named was the header's delimiter, which splits no data line)
            raise InputFileError(
                f"input file {str(path)!r}: the header line separates its {len(names)} names "
                f"by {setting_text(separator)}, the data lines their {width + extra} fields "
                f"by the delimiter {setting_text(delimiter)} ([input] delimiter): write the header "
                f"with the data's delimiter in a copy of the file")
        blank_names = [name for name in re.split(r" {2,}", str(raw.columns[0]).strip())
                       if name]
        if (width == 1 and not separator and delimiter == "\t"
                and len(blank_names) == width + extra):
            # the header's tabs turned into runs of blanks (an editor's setting) over
            # tab-delimited data lines: the header is one name (layouts32; layouts31
            # named such blanks on data lines)
            whitespace = ("" if any(" " in name for name in blank_names) else
                          ", or set [input] delimiter = \"whitespace\" (no name holds a "
                          "blank)")
            raise InputFileError(
                f"input file {str(path)!r}: the header line separates its "
                f"{len(blank_names)} names by runs of blanks, the data lines their "
                f"{width + extra} fields by tabs ([input] delimiter): tabs turned into "
                f"blanks by an editor? write the header with tabs in a copy of the file"
                f"{whitespace}")
        commas = str(raw.columns[0]).split(",")
        if (width == 1 and not separator and delimiter != "," and len(commas) == width + extra
                and any("," in str(cell) for column in cells for cell in column[:1000])):
            # a header in commas over records holding commas of their own (decimal
            # commas): the header's commas are no reading (review73: "is a name missing?")
            raise InputFileError(
                f"input file {str(path)!r}: the header line holds {len(commas)} names if "
                f"split at its commas, as many as the data lines' fields (delimiter "
                f"{setting_text(delimiter)}), but the data lines hold commas too (decimal "
                "commas?), so the header's commas cannot be read as its separator: write "
                "the header with the data's delimiter in a copy of the file")
        single = str(raw.columns[0]).split()
        if width == 1 and not separator and len(single) == width + extra:
            # names split at single blanks as many as the fields: a name may hold a
            # blank, and a header missing a name then reads every later name one field
            # off (review73), so no reading is taken
            raise InputFileError(
                f"input file {str(path)!r}: the header line holds {len(single)} names if "
                f"split at its single blanks, as many as the data lines' fields (delimiter "
                f"{setting_text(delimiter)}), but a name may hold a blank too (\"net "
                "radiation\"), so no reading can tell the names: write the header with the "
                "data's delimiter in a copy of the file")
        if width == 1 and separator:
            # a header of one cell holding another separator: decimal commas in the data
            # lines split them where the header line stays whole
            raise InputFileError(
                f"input file {str(path)!r}: the header is one cell holding "
                f"{setting_text(separator)} and the data lines split at their commas: set "
                f"[input] delimiter = {setting_text(separator)}")
        fused = (fused_header_names(header_line, data_line)
                 if delimiter == _WHITESPACE and data_line else [])
        if fused:
            # names that fill their fixed width touch (layouts35: "is a column name
            # missing?")
            raise InputFileError(
                f"input file {str(path)!r}: line {int(filled[0]) + first_line} has "
                f"{width + extra} fields where the header has {width}: the header's "
                f"{_names(fused, 3)} stand(s) over {width + extra - width + len(fused)} "
                "columns of the records, names run together (fixed-width columns whose "
                "names fill their width); give the widths as [input] column_widths "
                "(characters of each column, left to right) instead of delimiter")
        raise InputFileError(
            f"input file {str(path)!r}: line {int(filled[0]) + first_line} has "
            f"{width + extra} fields where the header has {width}; {filled.size} such "
            "line(s) hold values beyond the last named column. Is a column name missing in "
            "the header, or is [input] delimiter wrong? Correct a copy of the file")
    return pd.DataFrame(dict(zip(raw.columns, cells[:width], strict=True)))


def _header_and_first(text: str, rows_before_header: int, first_line: int,
                      delimiter: str) -> tuple[str, str]:
    """The header line and the first record line of a blank-separated file (else two
    empty strings: only :func:`fixed_width.fused_header_names` reads them)."""
    if delimiter != _WHITESPACE:
        return "", ""
    lines = text.splitlines()[:first_line]
    return (lines[rows_before_header] if len(lines) > rows_before_header else "",
            lines[first_line - 1] if len(lines) >= first_line else "")


def _header_breaks(text: str, rows_before_header: int, delimiter: str) -> int:
    """The line breaks inside the header's quoted names (a spreadsheet's wrapped header
    cells, :mod:`fluxpart.header_cells`): the lines the header takes beyond its first,
    by which every record's line number moves (layouts43)."""
    head = text[:65536].splitlines()[rows_before_header:]
    if not head or '"' not in head[0] or delimiter == _WHITESPACE:
        return 0
    reader = csv.reader(iter(head), delimiter=delimiter)
    if next(reader, None) is None or reader.line_num >= len(head):
        return 0                              # no record after it: no quote closed
    return reader.line_num - 1


def _record_lines(text: str, first_line: int, count: int, delimiter: str) -> np.ndarray:
    """The line of the file on which each of the `count` rows read from `first_line` on
    begins: one line each, unless quoted values hold line breaks (a note column written
    "rain,\nheavy"), where the csv module tells where each record starts."""
    if '"' not in text or delimiter == _WHITESPACE:
        return np.arange(count) + first_line
    text_lines = text.splitlines()[first_line - 1:]
    if len(text_lines) == count:
        return np.arange(count) + first_line
    reader = csv.reader(iter(text_lines), delimiter=delimiter)
    starts = []
    while len(starts) < count:
        start = reader.line_num
        if next(reader, None) is None:
            break
        starts.append(start)
    if len(starts) != count:
        return np.arange(count) + first_line
    return np.asarray(starts) + first_line


def _blank_rows(raw: pd.DataFrame) -> np.ndarray:
    """Rows whose every cell is empty or whitespace.

    Column by column, each looking only at the rows still blank in the columns before
    (in a file of records the first column already settles almost every row).
    """
    blank = np.ones(len(raw), dtype=bool)
    for _, column in raw.items():
        rows = np.flatnonzero(blank)
        if rows.size == 0:
            break
        blank[rows] = (column.iloc[rows].str.strip() == "").to_numpy(dtype=bool)
    return blank


#: Marks that open a remark a logger or an observer writes after a record's last value
#: ("# batt low", "// fan off", "! wet"; common practice).
_REMARK_MARKS = ("#", "//", "!")


def _remark_beyond_header(text: str, width: int, delimiter: str) -> str:
    """Name fields written after a record's last named column that open with a remark
    mark (",# batt low"), with how many lines hold one, or "".

    Such a remark is no column: the records it follows may be meant kept or dropped, as
    the values a comment follows in a cell (:func:`_numbers`), so it is named, not
    read past (layouts41: "a delimiter inside a value, or two records run together?").
    """
    if not text or delimiter == _WHITESPACE:
        return ""
    remarks = [parts[width].strip() for parts in
               (line.split(delimiter, width) for line in text.splitlines())
               if len(parts) > width and parts[width].lstrip().startswith(_REMARK_MARKS)]
    if not remarks:
        return ""
    return (f"the fields after the last named column hold a remark ({remarks[0]!r} and "
            f"{len(remarks) - 1} more line(s)), not a value: the records remarked may be "
            "meant kept or dropped, two readings with other budgets; in a copy of the file "
            "remove the remarks (values kept) or write those records' values as a missing "
            "code (dropped)")


def _parser_message(path: Path, delimiter: str, error: str, header_line: str = "",
                    text: str = "") -> str:
    """The tokenizer's complaint as one plain line naming the file and line.

    A header line without `delimiter` that holds another separator is a file of another
    delimiter whose data lines split at decimal commas, as many fields as each line's
    values hold commas (a line with a missing code holds fewer than the next one). Fields
    beyond the header that open with a remark mark are named as a remark
    (:func:`_remark_beyond_header`)."""
    if "out of memory" in error:
        # the tokenizer's buffer allocation failed (ulimit -v, a container's or batch job's
        # memory limit): the file was blamed, with its delimiter
        return (f"input file {str(path)!r}: reading it ran out of memory (a memory limit of "
                "this process: ulimit -v, a container's or a batch job's); the file is not at "
                "fault: give the process more memory")
    found = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", error)
    separator = next((c for c in (";", "\t", "|") if c in header_line), None)
    if (separator and delimiter not in (_WHITESPACE, separator)
            and delimiter not in header_line):
        return (f"input file {str(path)!r}: the header is one cell holding "
                f"{setting_text(separator)} and the data lines split at their commas: set "
                f"[input] delimiter = {setting_text(separator)}")
    if found:
        expected, line, saw = found.groups()
        if header_line and delimiter != _WHITESPACE:
            # the parser's expected count is the first data line's where that line holds
            # more fields than the header (it took the extra ones as a row index)
            expected = field_count(header_line, delimiter)
        remark = _remark_beyond_header(text, int(expected), delimiter)
        if remark:
            return (f"input file {str(path)!r}: line {line} has {saw} fields where the header "
                    f"has {expected}: {remark}")
        return (f"input file {str(path)!r}: line {line} has {saw} fields where the header has "
                f"{expected} (delimiter {delimiter!r}); a delimiter inside a value, or two "
                "records run together after an interrupted write? Correct or delete that line "
                "in a copy of the file")
    return (f"input file {str(path)!r} cannot be parsed with delimiter {delimiter!r}: "
            f"{' '.join(error.split())}")


def _skip_interleaved_lines(path: Path, text: str, delimiter: str, rows_before_header: int,
                            rows_after_header: int, warnings: list, note_mark=None,
                            titles_from: int = 0) -> str:
    """`text` with the header blocks written again after a logger restart and the note
    lines among the records emptied (line numbers kept), each named in `warnings`
    (:mod:`fluxpart.interleaved_lines`; layouts37: refused before). `titles_from`: the
    first title line of a file's later part (:func:`_program_change_parts`)."""
    if not interleaved_lines.may_hold(text, rows_before_header, delimiter, note_mark):
        return text                           # one C pass each; most files stop here
    lines = text.splitlines()
    blocks = interleaved_lines.repeated_header_blocks(lines, rows_before_header,
                                                      rows_after_header, delimiter,
                                                      titles_from)
    skipped = {index for first, last in blocks for index in range(first, last + 1)}
    if blocks:
        what = ("header line" if not rows_before_header + rows_after_header
                else "header line with its title and units lines")
        otherwise = [pair for block in blocks for pair in
                     interleaved_lines.rewritten_lines(lines, block, rows_before_header,
                                                       titles_from)]
        same = "the same characters (a logger program restarted?)"
        if otherwise:
            # a title naming the program's new version, units in another notation
            # (layouts40): named, so that the user sees what else the block says
            same = ("a logger program restarted or updated: " + "; ".join(
                f"{'title' if own < rows_before_header else 'units'} line {own + 1} "
                f"{lines[own].strip()[:80]!r} written {lines[again].strip()[:80]!r} on "
                f"line {again + 1}" for own, again in otherwise[:3]))
        warnings.append((str if otherwise else ReaderNote)(
            f"input file {str(path)!r}: the {what} written again {len(blocks)} time(s) "
            f"among the records, {same}, on "
            f"{_lines_word(skipped)} {interleaved_lines.ranges(sorted(skipped))}: skipped"))
    cut = interleaved_lines.cut_records(lines, blocks, rows_before_header, rows_after_header,
                                        delimiter)
    if cut:
        # a power cut stopped the logger mid-write, and it wrote its header again on
        # restarting (layouts42): the record before is dropped as a file's last line cut
        # short is (its last value may be cut mid-number)
        warnings.append(
            f"input file {str(path)!r}: {len(cut)} record(s) cut short right before the "
            f"header written again ({_lines_word(cut)} {interleaved_lines.ranges(cut)}: "
            f"{_shown_line(lines[cut[0]])!r}; a logger stopped mid-write and restarted?): "
            "dropped")
        skipped.update(cut)
    kept = [("" if index in skipped else line) for index, line in enumerate(lines)]
    width = (interleaved_lines.field_count(lines[rows_before_header], delimiter)
             if rows_before_header < len(lines) else 0)
    notes, mark = interleaved_lines.note_lines(kept, rows_before_header + rows_after_header
                                               + 1, delimiter, width, note_mark)
    if notes:
        why = "[input] note_mark" if note_mark else "as no record does"
        warnings.append((ReaderNote if note_mark else str)(
            f"input file {str(path)!r}: {len(notes)} note line(s) among the records start "
            f"with {mark!r}, {why} ({_lines_word(notes)} "
            f"{interleaved_lines.ranges(notes)}: "
            f"{_shown_line(lines[notes[0]])!r}, ...): skipped"))
        skipped.update(notes)
    return _emptied_lines(text, skipped)


def _first_in_file(lines: np.ndarray, rows: np.ndarray) -> int:
    """Position of the row of the mask `rows` that stands first in its file: the rows
    are in time order, which is not the file's where it was read reordered (sorted by
    another column, days newest first), and a note quotes the file's first line."""
    positions = np.flatnonzero(rows)
    return int(positions[np.argmin(lines[positions])])


def _lines_word(indices) -> str:
    return "line" if len(indices) == 1 else "lines"


def _header_text(parsed: str, rows_before_header: int) -> str:
    """The start of `parsed` from which the header row is read: the text through the
    header line where that text holds no quote and the line is not blank (no cell then
    runs on over a line break, and pandas' blank-line skip does not read on past it),
    else the whole text. A header read from a ten-year file's whole text took 20 ms, from its head
    lines 1 ms (round speed57). `parsed` is :func:`_read_text`'s text with LF or CR LF
    line ends (:func:`_lf_line_ends`)."""
    head = universal_head(parsed, rows_before_header + 1)
    line = head[len(universal_head(parsed, rows_before_header)):]
    return head if line.strip() and '"' not in head else parsed


def _emptied_lines(text: str, numbers: set) -> str:
    """`text` with the lines of the given 0-based `numbers` emptied, line ends kept."""
    if not numbers:
        return text
    pieces, start, last = [], 0, max(numbers)    # once: a later part of a file empties
    for index, end in enumerate(re.finditer(r"\r\n|\r|\n", text)):  # every line above it
        if index > last:
            break
        pieces += ["" if index in numbers else text[start:end.start()], end.group()]
        start = end.end()
    return "".join(pieces) + text[start:]


def _lf_line_ends(text: str) -> str:
    """`text` with every bare CR (a line end of classic Mac OS and of some loggers'
    exports) made LF, CR LF kept: the lines :meth:`str.splitlines` counts, one for one.

    pandas' tokenizer reads an empty line between CR-only line ends as part of the next
    line end when it skips lines (an emptied title or units line), so that every later
    line is one off: the line after a skipped units line was dropped unseen and the
    header taken from a record (pandas 3.1 (m); layouts36).
    """
    if "\r" not in text or text.count("\r") == text.count("\r\n"):
        return text
    return re.sub(r"\r(?!\n)", "\n", text)


def _unclosed_quote_line(text_lines: list, quote: str = '"') -> int:
    """Index of the line opening the quote that the file never closes: the last line
    after which an odd number of quote characters has been read (a doubled quote inside
    a quoted value counts two; a quoted value may span lines); `quote` the parser's
    quote character (``'`` where every cell is written in single quotes, review73: the
    file's last line was taken for it, dropped, and the file read again, line by line)."""
    odd = np.cumsum([line.count(quote) for line in text_lines]) % 2 == 1
    opened = np.flatnonzero(odd & ~np.concatenate([[False], odd[:-1]]))
    return int(opened[-1]) if opened.size else len(text_lines) - 1


def _field_count(line: str, delimiter: str) -> int:
    if delimiter == _WHITESPACE:
        return len(line.split())
    return len(next(csv.reader([line], delimiter=delimiter), []))


#: Lines from which on every line has another field count than the header before that is
#: taken for a logger program changed without a new header line, not for records cut
#: short; our choice (a day of hourly records), far more than a few interrupted writes.
_CHANGED_LAYOUT_LINES = 24


def _closed_from(text: str, line: int, width: int, delimiter: str,
                 first_data: int | None = None) -> str:
    """The note where every non-blank line from `line` (1-based) to the end holds one field
    more than the header's `width` and ends with the delimiter (the field after it empty),
    else ''.

    Where every record before `line` (from `first_data`, 1-based) ends with the
    delimiter already (its last column empty throughout, a "note" or alarm column), one
    empty field more is a column inserted before that column as well as a delimiter
    closing each line; only the second adds the delimiter after the empty last field,
    so the lines from `line` must then end with it twice (review41: a column inserted
    mid-file before an empty last column was read with every later column one to the
    left, the air temperature column holding Rg, and the run named unit mix-ups instead).
    """
    if delimiter == _WHITESPACE:
        return ""
    lines = text.splitlines()
    rest = [candidate for candidate in lines[line - 1:] if candidate.strip()]
    if not rest or not all(candidate.endswith(delimiter)
                           and _field_count(candidate, delimiter) == width + 1
                           for candidate in rest):
        return ""
    before = [candidate for candidate in lines[(first_data or line) - 1:line - 1]
              if candidate.strip()]
    if before and all(candidate.endswith(delimiter) for candidate in before) \
            and not all(candidate.endswith(delimiter * 2) for candidate in rest):
        return ""
    return (f"every line from line {line} on ({len(rest)} lines) ends with the delimiter "
            f"{delimiter!r}, an empty field after the header's {width}; delete it in a copy "
            "of the file")


def _names_line(line: str, delimiter: str) -> bool:
    """Whether every field of `line` is a name (a letter in it, no number), two or more:
    a header line, not a record."""
    cells = (line.split() if delimiter == _WHITESPACE
             else next(csv.reader([line], delimiter=delimiter), []))
    cells = [cell.strip() for cell in cells]
    if len(cells) < 2 or not all(cells):
        return False
    numbers = pd.to_numeric(pd.Series(cells), errors="coerce")
    return bool(numbers.isna().all()) and all(any(ch.isalpha() for ch in cell)
                                              for cell in cells)


def _changed_layout(path: Path, text_lines: list, line: int, width: int,
                    delimiter: str, first_data: int | None = None) -> str:
    """The refusal where every non-blank line from `line` (1-based) to the end has one
    field count other than the header's `width` (a logger program that added or removed
    a column and wrote no new header line), else ''. From the first record on
    (`first_data`, 1-based), there is no place to split: the header and the records
    disagree throughout (a name too many or too few in the header)."""
    rest = [candidate for candidate in text_lines[line - 1:] if candidate.strip()]
    if len(rest) < _CHANGED_LAYOUT_LINES:
        return ""
    counts = {_field_count(candidate, delimiter) for candidate in rest}
    if len(counts) != 1 or width in counts or min(counts) < 2:
        return ""       # mixed counts, or lines of one field (a footer or notes block)
    fields = counts.pop()
    what = "added" if fields > width else "removed"
    if (first_data is None or line > first_data) and _names_line(rest[0], delimiter):
        # a header line of its own over the lines from there (layouts36: a second table
        # of other columns written below the first was named as a header line missing)
        return (f"input file {str(path)!r}: line {line} ({_shown_line(rest[0])!r}) is a "
                f"header line of {fields} names where the header has {width}, and every "
                f"line from there on ({len(rest) - 1} lines) has {fields} fields: a second "
                "table in the file, or a logger program changed and wrote its new header? "
                f"Split the file at line {line} in a copy and list both parts in [input] "
                "path (each part is read by its own header)")
    if first_data is not None and line <= first_data:
        return (f"input file {str(path)!r}: every record (line {line} to the end, "
                f"{len(rest)} lines) has {fields} fields where the header has {width}: the "
                f"header names {'fewer' if fields > width else 'more'} columns than the "
                "records hold (a name added or lost when the header was edited, or a column "
                "the logger stopped writing?). Which column the records lack cannot be "
                "told from the file: give the header one name per field of the records in "
                "a copy of the file")
    return (f"input file {str(path)!r}: every line from line {line} on ({len(rest)} lines) "
            f"has {fields} fields where the header has {width}: a logger program that "
            f"{what} a column and wrote no new header line? Split the file at line {line} in "
            "a copy, give the part from there its own header line, and list both parts in "
            "[input] path")


def _drop_cut_last_line(path: Path, text: str, raw: pd.DataFrame, lines: np.ndarray,
                        delimiter: str, warnings, named: int | None = None
                        ) -> tuple[pd.DataFrame, np.ndarray]:
    """Find lines with fewer fields than the header's `named` fields (up to its last
    non-empty name; read as empty cells by the parser)."""
    width = raw.shape[1] if named is None else min(named, raw.shape[1])
    if raw.empty or width < 2:
        return raw, lines
    # a short line reads as "" in its last named column; only those lines are counted
    candidates = np.flatnonzero((raw.iloc[:, width - 1] == "").to_numpy())
    if candidates.size == 0:
        return raw, lines
    text_lines = text.splitlines()
    short = [int(row) for row in candidates
             if lines[row] - 1 < len(text_lines)
             and _field_count(text_lines[lines[row] - 1], delimiter) < width]
    if not short:
        return raw, lines
    last = len(raw) - 1
    inner = [row for row in short if row != last]
    footer = _comment_footer(text_lines, lines, short, last, delimiter)
    if inner and footer and inner[0] >= footer[0]:
        # a block of comment lines ending the file ("# end of file", "# records: 17520"):
        # no record among them; one footer line was dropped with a warning, a block of
        # them was "a comment line among the records" (layouts34)
        first = int(lines[footer[0]])
        if warnings is None:
            raise InputFileError(
                f"input file {str(path)!r}: lines {first} to {int(lines[last])} are comment "
                f"lines ending the file ({_shown_line(text_lines[first - 1])!r}, ...), a "
                "footer; delete them in a copy of the file")
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: its last {len(footer)} lines ({first} to "
            f"{int(lines[last])}: {_shown_line(text_lines[first - 1])!r}, ...) are comment "
            "lines ending the file, a footer: dropped"))
        return raw.iloc[:footer[0]].reset_index(drop=True), lines[:footer[0]]
    words = footers.word_footer(text_lines, lines, short, last) if inner else []
    if inner and words and inner[0] >= words[0]:
        # lines about the file after a blank line ("Records written,17520", "End of
        # data"): a footer of words (layouts38: "a record cut short" before)
        first = int(lines[words[0]])
        shown = "', '".join(_shown_line(text_lines[int(lines[row]) - 1]) for row in words[:3])
        more = ", ..." if len(words) > 3 else ""
        if warnings is None:
            raise InputFileError(
                f"input file {str(path)!r}: lines {first} to {int(lines[last])} ('{shown}'"
                f"{more}) open with words after a blank line, a footer; delete them in a "
                "copy of the file")
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: its last {len(words)} lines ({first} to "
            f"{int(lines[last])}: '{shown}'{more}) open with words after a blank line, "
            "a footer about the file: dropped"))
        return raw.iloc[:words[0]].reset_index(drop=True), lines[:words[0]]
    if inner:
        row = inner[0]
        changed = _changed_layout(path, text_lines, int(lines[row]), width, delimiter,
                                  int(lines[0]))
        if changed:
            raise InputFileError(changed)
        where = (f"input file {str(path)!r}: line {int(lines[row])} "
                 f"({_shown_line(text_lines[lines[row] - 1])!r}) has "
                 f"{_field_count(text_lines[lines[row] - 1], delimiter)} fields where the "
                 f"header has {width}")
        joined = (run_together_field(text_lines[lines[row] - 1])
                  if delimiter == _WHITESPACE else None)
        if joined:
            # fixed-width columns whose values fill their width touch (layouts35: named
            # an empty value or a record cut short)
            raise InputFileError(
                f"{where}: its field {joined!r} is two values run together; {len(inner)} "
                "such line(s) before the last: the file's columns have fixed widths and a "
                "value that fills its width (a minus sign, a missing code) touches the next "
                "one, so blanks cannot split them; give the widths as [input] column_widths "
                "(characters of each column, left to right) instead of delimiter")
        if delimiter == _WHITESPACE:
            # blanks collapse: an empty value leaves no field and moves the values after
            # it one column left (layouts25: the fix named was "write missing values as
            # empty cells between delimiters", which such a file cannot hold)
            raise InputFileError(
                f"{where}; {len(inner)} such line(s) before the last: in a file whose fields "
                "are separated by blanks an empty value leaves no field (the values after "
                "it would move one column left), and a record cut short looks the same; "
                "write each missing value as a code (e.g. -9999, listed in [input] missing) "
                "in a copy of the file, or save it with a delimiter (\",\", \";\" or a tab)")
        if text_lines[lines[row] - 1].lstrip().startswith(_COMMENT_MARKS) and not (
                delimiter == ";" and text_lines[lines[row] - 1].lstrip().startswith(";")):
            # a note written among the records ("# sensor cleaned"): no record cut short
            # (layouts25: the line named a value cut mid-number)
            raise InputFileError(
                f"{where}: a comment line among the records (it starts with "
                f"{text_lines[lines[row] - 1].lstrip()[:2].rstrip()!r}); {len(inner)} such "
                "line(s) before the last. Delete them in a copy of the file (keep the notes "
                "in a separate file)")
        spaced = text_lines[lines[row] - 1]
        if delimiter == "\t" and re.search(r" {2,}", spaced) and _field_count(
                re.sub(r" *\t *| {2,}", "\t", spaced.strip()), delimiter) == width:
            # tabs typed or converted as blanks on some lines (an editor's tab setting;
            # layouts31: named "a record cut short"): with runs of two or more blanks
            # taken for tabs the line holds the header's fields
            raise InputFileError(
                f"{where}: it separates fields by runs of blanks where the other lines "
                f"hold tabs (an editor that turned tabs into spaces?); {len(inner)} such "
                "line(s) before the last. Write a tab between the fields of those lines in "
                "a copy of the file, or set [input] delimiter = \"whitespace\" where no "
                "value holds a blank")
        raise InputFileError(
            f"{where}; a record cut short may hold a value cut mid-number; "
            f"{len(inner)} such line(s) before the last. Complete or delete them (or a footer) "
            "in a copy of the file (write missing values as empty cells between delimiters)")
    fields = _field_count(text_lines[lines[last] - 1], delimiter)
    shown = _shown_line(text_lines[lines[last] - 1])
    # quoted, so that the user sees whether a record or a footer ("END OF FILE") was dropped
    note = (f"input file {str(path)!r}: its last line ({int(lines[last])}: {shown!r}) has "
            f"{fields} field(s) where the header has {width}, a record cut short (a logger "
            "stopped mid-write) or a footer: dropped")
    if warnings is None:
        raise InputFileError(note.replace(": dropped", "; delete that line"))
    warnings.append(note)
    return raw.iloc[:last].reset_index(drop=True), lines[:last]


def _comment_footer(text_lines: list, lines: np.ndarray, short: list, last: int,
                    delimiter: str) -> list:
    """Rows (0-based, ascending) of the block of short comment lines that ends the file
    (two or more, each starting with a comment mark), else []."""
    if delimiter == _WHITESPACE:
        return []
    marks = tuple(m for m in _COMMENT_MARKS if not (delimiter == ";" and m == ";"))
    shorts, block = set(short), []
    row = last
    while row in shorts and text_lines[lines[row] - 1].lstrip().startswith(marks):
        block.append(row)
        row -= 1
    return block[::-1] if len(block) >= 2 else []


_DECIMALS = re.compile(r"^\s*[+-]?\d*[.,](\d+)\s*$")
_WHOLE = re.compile(r"^\s*[+-]?\d+\s*$")


def _drop_cut_last_value(path: Path, text: str, raw: pd.DataFrame, lines: np.ndarray,
                         warnings, named: int) -> tuple[pd.DataFrame, np.ndarray]:
    """Drop the last line where the file ends without a line end inside its last value: a
    logger stopped mid-write after the last delimiter leaves every field, the last one
    cut ("97.3" written as "9" or "97"). Told by the column's fixed decimals (a logger
    writes each column with a fixed number of them): the cell has fewer decimals than
    every number with decimals (5 or more) among the 20 lines before it.
    """
    if text[-1:] in ("\n", "\r", "") or warnings is None or len(raw) < 21:
        return raw, lines
    column = raw.iloc[-21:, min(named, raw.shape[1]) - 1]
    before = column.iloc[:-1].str.extract(_DECIMALS, expand=False).str.len().dropna()
    if before.size < 5 or before.nunique() != 1:
        return raw, lines
    decimals = int(before.iloc[0])
    cell = column.iloc[-1]
    found = _DECIMALS.match(cell)
    cut = (len(found[1]) < decimals) if found else bool(
        _WHOLE.match(cell.rstrip().rstrip(".,"))) or cell.strip() in ("", "-", "+", ".", ",")
    if not cut:
        return raw, lines
    last = len(raw) - 1
    warnings.append(
        f"input file {str(path)!r}: its last line ({int(lines[last])}: "
        f"{_shown_line(text.splitlines()[lines[last] - 1])!r}) ends without a line end in a "
        f"value with fewer decimals ({cell.strip()!r}) than the {decimals} of that column "
        "in the lines before it, a record cut short (a logger stopped mid-write): dropped")
    return raw.iloc[:last].reset_index(drop=True), lines[:last]


def _shown_line(line: str) -> str:
    """A line of the file as quoted in a message: stripped, at most 40 characters."""
    line = line.strip()
    return line if len(line) <= 40 else line[:40] + "..."


#: a spreadsheet's note of the delimiter on a file's first line ("sep=;"), quoted or
#: followed by the delimiter itself where a sheet saved the line again as a row
_SEPARATOR_LINE = re.compile(r'\s*"?sep=(.)"?(?:\1)*\s*', re.IGNORECASE)


def _separator_line(text: str, delimiter: str, rows_before_header: int, path: Path) -> int:
    """1 where the file's first line is a spreadsheet's note of its delimiter ("sep=;")
    and no line is set above the header: that line is read as a line above the header.

    Parameters
    ----------
    text : str
        The decoded file.
    delimiter : str
        The [input] delimiter (one character, or "whitespace").
    rows_before_header : int
        The [input] rows_before_header; where it is not 0, the lines above the header
        are the setting's (the note among them) and 0 is returned.
    path : pathlib.Path
        The file (for the message).

    Returns
    -------
    int
        1 (the note is skipped) or 0 (no note, or rows_before_header set).

    Raises
    ------
    InputFileError
        Where the note names another delimiter than [input] delimiter: the file and the
        setting disagree, and one of them is wrong.

    References
    ----------
    Excel reads a first line "sep=X" as the delimiter of the CSV file that follows and
    writes it on request; it holds no name and no record (Microsoft documentation of
    opening CSV files (m); common practice).
    """
    if rows_before_header:
        return 0
    # the note is short: no copy of the whole text; a CR alone ends a line too (layouts36:
    # a CR-only file's note was read as the header)
    first = re.split(r"\r\n|\r|\n", text[:256], maxsplit=1)[0]
    match = _SEPARATOR_LINE.fullmatch(first)
    if match is None:
        return 0
    named = match.group(1)
    agrees = named == delimiter or (delimiter == _WHITESPACE and named in " \t")
    if not agrees:
        shown = "tab" if named == "\t" else repr(named)
        raise InputFileError(
            f"input file {str(path)!r}: its first line ({first.strip()!r}) is a "
            f"spreadsheet's note that the file's delimiter is {shown}, but [input] "
            f"delimiter = {setting_text(delimiter)}: set delimiter = "
            f"{setting_text(named)} if the note is right, or delete that line in a copy of "
            "the file if it is not")
    return 1


def _blank_lines_at(text: str, line: int) -> int:
    """Blank lines (whitespace only) from the 0-based `line` on, among the first 50."""
    lines = leading_lines(text, 50)[line:]
    return next((count for count, each in enumerate(lines) if each.strip()), 0)


def _check_header_line(text: str, delimiter: str, time_columns: tuple,
                       rows_before_header: int, path: Path) -> int:
    """Raise with the right ``rows_before_header`` when the header is on another line;
    return the blank lines that stand between the lines set above the header and the
    header (0 for the usual file), which are read past.

    Run on the text before the parser, whose complaints about a title line read as the
    header (too few names for the data lines) would hide the setting that fixes them.
    Blank lines above the header hold nothing to count or skip (an export that opens
    with empty lines, or leaves one under its title): read past since layouts43,
    refused before with the setting counting them.
    """
    separator = None if delimiter == _WHITESPACE else delimiter
    lines = leading_lines(text, 50)
    if rows_before_header < len(lines) and time_columns[0] in [
            cell.strip().strip('"') for cell in lines[rows_before_header].split(separator)]:
        return 0
    for number, line in enumerate(lines):
        cells = [cell.strip().strip('"') for cell in line.split(separator)]
        if number > rows_before_header and time_columns[0] in cells and not any(
                above.strip() for above in lines[rows_before_header:number]):
            return number - rows_before_header
        if number != rows_before_header and time_columns[0] in cells:
            raise MissingColumnError(
                f"[input] time_column = {setting_text(time_columns[0])} is not in the header read from "
                f"line {rows_before_header + 1} of {str(path)!r} but on line {number + 1}: set "
                f"[input] rows_before_header = {number}")


def _header_line_number(text: str, delimiter: str, time_column: str) -> int | None:
    """Index of the first of the text's first 50 lines holding `time_column` as a cell."""
    separator = None if delimiter == _WHITESPACE else delimiter
    for number, line in enumerate(text.splitlines()[:50]):
        if time_column in [cell.strip().strip('"') for cell in line.split(separator)]:
            return number
    return None


def _decoded_files(paths: list, encoding):
    """(path, text) of each of `paths` that decodes; the others are left to the per-file
    checks."""
    for path in paths:
        try:
            yield path, _decode(path, encoding)[0]
        except (InputFileError, UnicodeError, OSError):
            continue


def _refuse_delimiters_differ(paths: list, encoding, delimiter: str,
                              time_columns: tuple) -> None:
    """Raise where the input files write their header with different delimiters.

    A flux file of commas beside a drivers file of semicolons: the first file's refusal
    named the delimiter that reads it ("set [input] delimiter = ','"), which then refuses
    the other (layouts44). Names each delimiter found with its files. Files that cannot
    be decoded or hold no header line in any of them are left to the per-file checks.
    """
    found: dict[str, list] = {}
    for path, text in _decoded_files(paths, encoding):
        for candidate in dict.fromkeys((delimiter, ",", ";", "\t", "|")):
            if _header_line_number(text, candidate, time_columns[0]) is not None:
                found.setdefault(candidate, []).append(str(path))
                break
    if len(found) < 2:
        return
    listing = "; ".join(f"{setting_text(d)} in {_file_list(found[d])}" for d in found)
    raise InputFileError(
        f"[input] delimiter = {setting_text(delimiter)}: the input files write their fields "
        f"with different delimiters ({listing}); one delimiter reads every file, so write "
        "them all with one in copies")


def _refuse_time_column_spelled_otherwise(error: MissingColumnError, path: Path,
                                          paths: list, parts: list, encoding,
                                          delimiter: str, time_columns: tuple) -> None:
    """Raise where another input file holds the time column this one lacks as written.

    Month files whose header a logger program or export wrote in capitals (or another
    spelling) from one month on were refused with the other file's spelling offered
    ("did you mean 'STAMP_END'?"), which then refuses the files read before; now named
    as headers that differ between files. Only a time-column refusal of one file among
    several is considered; others keep their message.
    """
    text = str(error)
    if len(paths) < 2 or not text.startswith("[input] time_column = ") \
            or "no such column in" not in text:
        return
    having = [part["source"] for part in parts]
    if not having:
        for other in paths:
            if other == path:
                continue
            try:
                decoded, _ = _decode(other, encoding)
            except (InputFileError, UnicodeError, OSError):
                continue
            if _header_line_number(decoded, delimiter, time_columns[0]) is not None:
                having.append(str(other))
                break
    if not having:
        return
    raise MissingColumnError(
        f"{text}; but {having[0]!r} has the column as written: the input files write their "
        "header differently (other names or capitals from one file on?), and one [input] "
        "time_column reads every file, so give this file the others' header line in a copy")


def _header_as_set_elsewhere(paths: list, encoding, delimiter: str, time_columns: tuple,
                             rows_before_header: int) -> bool:
    """True where one of `paths` holds its header line on the line ``rows_before_header``
    sets: read first, it sets the header the files before it are then read under
    (:func:`fluxpart.later_files.title_lines_added`, `title_lines_lacking`)."""
    return any(_header_line_number(text, delimiter, time_columns[0]) == rows_before_header
               for _, text in _decoded_files(paths, encoding))


def _refuse_header_lines_differ(paths: list, encoding, delimiter: str, time_columns: tuple,
                                rows_before_header: int) -> None:
    """Raise where the files' headers stand on different lines (blocks of other lengths).

    A logger that writes a block of metadata above its header (serial numbers, program
    name, calibration lines) of another length in some files (a line added at a
    program change) cannot be read with one ``rows_before_header``: the per-file hint
    ("set rows_before_header = 3") fixed one file and refused the next with another
    number. Names every length found and the files of each. Files that cannot be
    decoded or hold no such line are left to the per-file checks.
    """
    found: dict[int, list] = {}
    for path, text in _decoded_files(paths, encoding):
        number = _header_line_number(text, delimiter, time_columns[0])
        if number is not None:
            found.setdefault(number, []).append(str(path))
    if len(found) < 2:
        return
    counts = "; ".join(f"{number} line(s) above it in {_file_list(found[number])}"
                       for number in sorted(found))
    raise MissingColumnError(
        f"[input] rows_before_header = {rows_before_header}: the input files have blocks of "
        f"different lengths above their header line (the line holding time_column = "
        f"{setting_text(time_columns[0])}): {counts}; one rows_before_header reads every "
        "file, so give every file the same number of lines above its header in copies "
        "(remove the extra ones)")


def _code_hint(name, values, canonical, derived, missing) -> str:
    """The undeclared-missing-code hint of variable `name`, looked for in the file column
    its values come from: PPFD for an Rg derived from it, the turbulent flux and then the
    storage column for NEE (their sum is what left the range)."""
    variable = VARIABLES[name]
    raw = values.get("ppfd" if name == "rg" and "rg" in derived else name)
    hint = _undeclared_code(raw, canonical, variable, missing)
    if not hint and name == "nee" and "storage" in values:
        hint = _undeclared_code(values["storage"], canonical, variable, missing,
                                column="storage")
    return hint


def _undeclared_code(raw, canonical, variable, missing, column=None) -> str:
    """A hint where most implausible values of a column are one number: a missing code.

    ``raw`` holds the column's values as read (before unit conversion), ``canonical``
    the same records converted; the hint is given where one value makes up at least
    half of the values outside ``variable``'s plausible range and occurs at least 3
    times (our choice: a logger's undeclared code repeats exactly; a unit mix-up or a
    faulty sensor spreads over many values). ``column`` names the file column the
    raw values come from where it is not the variable's own (the storage column of NEE).
    """
    if raw is None or len(raw) != len(canonical):
        return ""
    with np.errstate(invalid="ignore"):
        outside = ((canonical < variable.minimum) | (canonical > variable.maximum)) \
            & apart_from_readings(canonical, variable)
    found = undeclared_code(np.asarray(raw, dtype=float)[outside])
    if found is None:
        return ""
    return missing_code_hint(*found, missing, f" in the {column} column" if column else "")


#: Undeclared codes read as missing in one column at most (our choice: files of two or
#: three loggers joined, each writing its own code; the next one found after them is
#: left to the range warning and screening).
_MAX_UNDECLARED_CODES = 3


def _blank_undeclared_codes(values, converted, mapping, missing, warnings) -> None:
    """Read as missing, named, the cells of each column that hold an undeclared
    missing-data code (:func:`fluxpart.unit_checks.undeclared_code_cells`).

    A column whose code fills more than a few percent of it was refused before (its
    hint asks for the code in ``[input] missing``); a code in fewer cells (-6999 in the
    weather columns of a file joined from two loggers, -9999 declared) was kept as a
    value, warned, and its records held -6999 W m-2 in the tables beside an out-of-range
    flag, and entered as measured a VPD derived from it (round layouts55).
    """
    for name in list(converted):
        for _ in range(_MAX_UNDECLARED_CODES):
            found = undeclared_code_cells(name, values[name], converted[name])
            if found is None:
                break
            cells, code, count = found
            converted[name] = np.where(cells, np.nan, converted[name])
            warnings.append(
                f"{name}: the value {code:g} alone occurs {count} times in column "
                f"{mapping[name]!r}, beyond the plausible range of {name}: read as missing, "
                f"an undeclared missing-data code (add it to [input] missing, now "
                f"{list(missing)}, to say so, or correct the file if it is a reading)")


def _flag_key(column: str) -> str:
    return f"nee_flag:{column}"


#: a format of ISO 8601 stamps without a UTC offset, standing for time_format = "ISO8601"
#: where no stamp of the file carries one (the file's statements of a clock are judged)
_ISO_WITHOUT_OFFSETS = "%Y-%m-%dT%H:%M:%S"


def _read_file(path: Path, **settings) -> list:
    """Read one file: its stamps in local standard time and the numbers of each column,
    as a list of one part, or of the parts a logger program change divides it into (each
    read by its own header, :func:`_program_change_parts`).

    `settings` are those of :func:`_read_records` (the keyword arguments of
    :func:`read_table` as checked there, and the file's place among several).
    `may_lack`: mapped columns the file lacks are listed in ``"lacking"`` (and not read)
    instead of refused (one of several files). `first_header`: the header line and the
    lines under it of the first file read (a later file of several), for a file that
    lacks its title lines or its header (:mod:`fluxpart.later_files`), named in
    `later_notes` (a dict of lists of files). A typed table
    (:mod:`fluxpart.table_formats`) is read from its text, its messages counting
    records where a text file's count lines.
    """
    columns, time_columns = settings["columns"], settings["time_columns"]
    flag_columns, other_names = settings["flag_columns"], settings.get("other_names")
    time_format, warnings = settings["time_format"], settings["warnings"]
    wanted = (*columns.values(), *time_columns, *flag_columns,
              *(name for names in (other_names or {}).values() for name in names))
    clock = {"time_columns": time_columns, "time_format": time_format,
             "utc_offset": settings["utc_offset"], "time_zone": settings["time_zone"]}
    text, used_encoding = _decode(path, settings["encoding"], warnings,
                                  typed={"wanted": wanted, "clock": clock})
    if not isinstance(text, table_formats.TableText):
        if not settings.get("column_widths"):
            parts = _program_change_parts(path, text, used_encoding, settings)
            if parts:
                return parts
        return [_read_records(path, text, used_encoding, **settings)]
    # a typed table's text: written as one comma-separated header line and records,
    # whatever the layout settings say, which are a text file's (table_formats)
    settings |= {"time_format": text.time_format or time_format, "delimiter": ",",
                 "decimal": ".", "rows_before_header": 0, "rows_after_header": 0,
                 "column_widths": (), "note_mark": None}
    start = len(warnings)
    try:
        part = _read_records(path, text, used_encoding, **settings)
    except _EmptyFileError:
        raise
    except FluxpartError as error:
        unnamed = (f" (the file's unnamed pandas index is the column "
                   f"{' and '.join(repr(name) for name in text.index_names)})"
                   if isinstance(error, MissingColumnError) and text.index_names
                   and "time_column" in str(error) else "")
        raise type(error)(table_formats.record_wording(str(error)) + unnamed) from None
    warnings[start:] = [type(warning)(table_formats.record_wording(warning))
                        for warning in warnings[start:]]
    part["lines"] = part["lines"] - 1          # record places, 1-based
    part["place_word"] = "record"              # named so once files are combined
    return [part]


#: Characters other than CR and LF that ``str.splitlines`` counts as line breaks and the
#: CSV parser does not: a text holding one is not divided (its line numbers would differ).
_OTHER_BREAKS = re.compile("[\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029]")


def _program_change_parts(path: Path, text: str, used_encoding: str, settings: dict) -> list:
    """The parts of a file that a logger program change divides (its header block
    written again with other columns, :mod:`fluxpart.program_parts`), each read by its
    own header and the lines under it as a file of a series is, or [] where the file holds
    no such block. Each part is read from a text whose lines outside it are blank, so that
    every message names the line of the whole file; its source is the file and its lines
    (``'t.csv' (lines 8693-17528)``), which the join names as it names files. Raises where a
    block cannot be trusted, or where a mapped column's units line names another unit in a
    later part (read as the first part's, its values would be wrong)."""
    time_columns, delimiter = settings["time_columns"], settings["delimiter"]
    rows_before_header = settings["rows_before_header"]
    head = leading_lines(text, rows_before_header + 1)
    if len(head) <= rows_before_header or not time_columns:
        return []
    # the time column's name again after the header, as the header writes it (one C
    # pass; most files stop here): a block written again in other capitals is left to
    # the reader's refusals
    start = text.find(head[rows_before_header])
    name = next((cell for cell in later_files.cells(head[rows_before_header], delimiter)
                 if cell.casefold() == str(time_columns[0]).strip().casefold()), "")
    if not name or start < 0 or text.find(name, start + len(head[rows_before_header])) < 0:
        return []
    if _OTHER_BREAKS.search(text):
        return []
    lines = text.splitlines()
    found, refusal, at = program_parts.program_parts(
        lines, rows_before_header, settings["rows_after_header"], delimiter, time_columns)
    if refusal:
        raise InputFileError(
            f"input file {str(path)!r}: line {at + 1} is a header line with other names or "
            f"another order than the header of line {rows_before_header + 1} (a logger "
            f"program changed and wrote its new header?), but {refusal}: split the file "
            "there in a copy and list the parts in [input] path (each part is read by its "
            "own header)")
    if not found:
        return []
    kept = text.splitlines(keepends=True)
    ending = next(iter(re.findall(r"\r\n|\r|\n", kept[0])), "\n")
    parts = []
    for number, piece in enumerate(found):
        own = settings | {"may_lack": True}
        if number:
            own |= {"rows_before_header": piece.header, "rows_after_header": piece.units,
                    "first_header": None, "titles_from": piece.first}
        part = _read_records(path, ending * piece.first + "".join(kept[piece.first:piece.end]),
                             used_encoding, **own)
        parts.append(part | {"source": f"{path} (lines {piece.first + 1}-{piece.end})",
                             "file": str(path)})
    _refuse_part_units(path, parts, [piece.header for piece in found])
    _refuse_parts_going_back(path, parts, [piece.header for piece in found])
    warnings = settings["warnings"]
    warnings.append(ReaderNote(
        f"input file {str(path)!r}: the header block written again with other columns "
        f"(a logger program changed) on line(s) "
        f"{', '.join(str(piece.header + 1) for piece in found[1:])}: the {len(found)} parts "
        "read each by its own header and joined as files are"))
    return parts


def _refuse_parts_going_back(path: Path, parts: list, headers: list) -> None:
    """Raise where a later part of the file opens with a stamp earlier than a record of
    the parts before it and not one of theirs (a copy of an overlap is left to the
    join's check of overlapping files): one logger appends its parts in the order of its
    clock, as it writes the records of one part, whose stamps going back are refused
    (:func:`fluxpart.stamp_sequence.check_order`); joined as files are, sorted, a part dated
    by a clock reset at the program change would be read at another period."""
    if any(part["newest_first"] for part in parts):
        return
    for number in range(1, len(parts)):
        stamps = parts[number]["stamps"]
        before = pd.DatetimeIndex(np.concatenate(
            [np.asarray(part["stamps"]) for part in parts[:number]]))
        if not len(stamps) or not len(before):
            continue
        if stamps[0] < before.max() and stamps[0] not in before:
            last = int(np.argmax(before.asi8))
            line = int(np.concatenate([part["lines"] for part in parts[:number]])[last])
            raise NonMonotonicTimestampError(
                f"input file {str(path)!r}: the records under the header written again on "
                f"line {headers[number] + 1} (a logger program changed) start at "
                f"{stamps[0]} (line {int(parts[number]['lines'][0])}), before the "
                f"record of {before[last]} on line {line} above it: one logger writes its "
                "records in the order of its clock (a clock reset at the program change, or "
                "files of other periods joined?); correct the stamps in a copy of the file, "
                "or split it there and list the parts in [input] path")


def _refuse_part_units(path: Path, parts: list, headers: list) -> None:
    """Raise where a mapped column's cell in the lines under the header (its unit) names
    another unit in a later part of the file than in the first: one [input.units] reads
    every part, so the later part's values would be read in the first part's unit."""
    first = parts[0]["header_rows"]
    for part, header in zip(parts[1:], headers[1:], strict=True):
        for name, (column, cells) in part["header_rows"].items():
            if name not in first:
                continue
            before = first[name][1]
            keys = [(same_unit_key(name.split(":")[0], a), same_unit_key(name.split(":")[0], b))
                    for a, b in zip(before, cells, strict=False) if a and b]
            changed = [(a, b) for a, b in keys if a[0] == "unit" and b[0] == "unit" and a != b]
            if changed:
                shown = next((a, b) for a, b in zip(before, cells, strict=False)
                             if a and b and same_unit_key(name.split(":")[0], a)
                             != same_unit_key(name.split(":")[0], b))
                raise InputFileError(
                    f"input file {str(path)!r}: column {column!r} ({name.split(':')[0]}) is "
                    f"labelled {shown[0]!r} under the header of line "
                    f"{headers[0] + 1} but {shown[1]!r} under the header written again on "
                    f"line {header + 1} (a logger program changed its unit?): one [input.units] "
                    "reads the whole file, so convert the records of one unit in a copy "
                    "of the file, or split it there and list the parts in [input] path")


def _read_records(path: Path, text: str, used_encoding: str, *, columns, units,
                  flag_columns, time_columns, time_format, missing, delimiter, decimal,
                  encoding, rows_before_header, rows_after_header, time_zone, utc_offset,
                  warnings, may_lack=False, flag_missing=None, time_marks=None, site=None,
                  missing_by_variable=None, code_cells=None, column_widths=(),
                  other_names=None, renamed_in=None, first_header=None, later_notes=None,
                  note_mark=None, flag_words=None, flag_word_counts=None,
                  titles_from=0) -> dict:
    """:func:`_read_file` of the file's decoded `text` (`titles_from`: the first title line
    of a later part of a file, :func:`_program_change_parts`)."""
    if not column_widths:
        # a large file of finer records refused from samples, not after a parse of
        # minutes and gigabytes (leftovers50; faults39: 5.3 million lines, 37-82 s)
        _refuse_finer_records(path, text, delimiter, rows_before_header, rows_after_header,
                              time_columns, time_format, utc_offset, time_zone)
    written = text
    if column_widths:                         # a fixed-width file (layouts35)
        text = delimited(path, text, column_widths, rows_before_header)
    refuse_overlong_value(path, text, delimiter, _WHITESPACE)
    rows_before_header += _separator_line(text, delimiter, rows_before_header, path)
    text, rows_before_header, rows_after_header, borrowed = _later_file_layout(
        path, text, first_header, delimiter, rows_before_header, rows_after_header,
        later_notes, time_columns)
    wanted = [*columns.values(), *time_columns, *flag_columns,
              *(name for names in (other_names or {}).values() for name in names)]
    text, mark = header_cells.unmarked_header(text, rows_before_header, delimiter, wanted)
    if mark and may_lack and later_notes is not None:
        # several files: one note naming them all (layouts44: one a file before)
        later_notes.setdefault("marked", []).append((str(path), mark))
    elif mark:
        warnings.append(_marked_header_warning([(str(path), mark)]))
    # a group line or units row under blank lines above the header is judged where it
    # stands, as the blank lines are read past below (leftovers56)
    blank = _blank_lines_at(text, rows_before_header)
    at = rows_before_header + blank
    if header_cells.group_line_above(text, at, delimiter,
                                     [*columns.values(), *time_columns, *flag_columns]):
        rows_before_header = at + 1
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: line {at + 1} holds group titles above the header "
            f"(line {at + 2} holds every column named in the settings)"
            + (f", under {blank} blank line(s)" if blank else "") + ": read past"))
        at = rows_before_header
    # the header's separator first: a units row under it is judged by its names
    # (review73: a header in semicolons left the units row in parentheses a record)
    other = header_cells.header_separator(text, at, rows_after_header, delimiter,
                                          next(iter(time_columns), ""))
    if other:
        text = header_cells.with_header_separator(text, at, rows_after_header, other,
                                                  delimiter)
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: the header (line {at + 1}) is written with "
            f"{header_cells.SEPARATOR_WORDS[other]} where the records use "
            f"{header_cells.SEPARATOR_WORDS.get(delimiter, repr(delimiter))}; each of "
            "its names stands over a field: read so"))
    marks = "" if rows_after_header else header_cells.bracketed_units_row(text, at,
                                                                           delimiter)
    if marks:
        rows_after_header = 1
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: line {at + 2} under the header holds "
            f"units in {'brackets' if marks == '[]' else 'parentheses'}, no record: "
            "read as a units row"))
    blank_above = _check_header_line(text, delimiter, time_columns, rows_before_header, path)
    if blank_above:
        rows_before_header += blank_above
        warnings.append(ReaderNote(f"input file {str(path)!r}: {blank_above} blank line(s) "
                                   f"above the header (line {rows_before_header + 1}) read past"))
    text = _skip_interleaved_lines(path, text, delimiter, rows_before_header,
                                   rows_after_header, warnings, note_mark,
                                   min(titles_from, rows_before_header))
    if delimiter == _WHITESPACE:
        text = _bracketed_unit_names(path, text, rows_before_header, rows_after_header,
                                     warnings)
    try:
        raw, lines, header, unnamed_surplus = _read_text(path, text, delimiter,
                                                         rows_before_header,
                                                         rows_after_header, warnings)
        raw.columns = [bracket_names.restored(name) for name in raw.columns]
        header = [bracket_names.restored(name) for name in header]
    except InputFileError as error:
        named = (unquoted_decimal_commas(str(path), text.splitlines(), rows_before_header,
                                         rows_before_header + rows_after_header + 1)
                 if delimiter == "," and decimal == "," else None)
        if delimiter == "," and not named:
            named = unquoted_fraction_commas(str(path), text.splitlines(), rows_before_header,
                                             rows_before_header + rows_after_header + 1)
        if delimiter == "," and decimal != "," and not named:
            # '1,0' in single quotes (no CSV quotes) or unquoted: named with its column
            # (round leftovers61; "a delimiter inside a value" before)
            named = split_decimal_comma(str(path), text.splitlines(), rows_before_header,
                                        rows_before_header + rows_after_header + 1)
        if named:
            raise InputFileError(named) from None
        if borrowed:
            raise InputFileError(f"{error} (line numbers count the first file's header "
                                 "line put above this headerless file as line 1)") from None
        raise
    lines = lines - borrowed
    respelled = unicode_names.settings_spelling(list(raw.columns), [
        *columns.values(), *time_columns, *flag_columns,
        *(name for names in (other_names or {}).values() for name in names)])
    if respelled:
        raw = raw.rename(columns=respelled)
        header = [respelled.get(name, name) for name in header]
    unwrapped = header_cells.unwrapped_names(list(raw.columns), wanted)
    if unwrapped:
        raw = raw.rename(columns=unwrapped)
        header = [unwrapped.get(cell, cell) for cell in header]
        shown = ", ".join(repr(name) for name in list(unwrapped.values())[:3])
        warnings.append(ReaderNote(
            f"input file {str(path)!r}: {len(unwrapped)} header name(s) hold a "
            "line break (a spreadsheet's wrapped header cells), read as a blank: "
            f"{shown}"))
    if other_names:
        raw, header = _own_names(path, raw, header, columns, other_names, renamed_in)
    try:
        mapping, flag_columns, lacking = _resolve_columns(
            columns, units, list(raw.columns), header, time_columns, flag_columns, path,
            may_lack)
    except MissingColumnError as error:
        if column_widths:
            # a width one character off named the cut name as a column not in the file
            # (layouts53); the widths are the cause
            head = leading_lines(written, rows_before_header + 2 + rows_after_header)
            if len(head) > rows_before_header:
                cut = cut_names_message(head[rows_before_header], head[-1], column_widths)
                if cut:
                    raise InputFileError(f"input file {str(path)!r}: {cut}") from None
        widths = (f"; the header cut at [input] column_widths = {list(column_widths)}: is a "
                  "width off (a name cut, or parts of two names in one cell)?"
                  if column_widths else "")
        raise MissingColumnError(f"{error}{_utf8_hint(header, used_encoding)}{widths}") \
            from None
    source = str(path)
    shifted, shift = shifted_records(raw, time_columns, decimal, missing)
    if shifted.size:
        at = int(lines[shifted[0]])
        raise InputFileError(
            f"input file {source!r}: line {at} holds values that each fit the column to the {'right' if shift > 0 else 'left'} "
            "of their own, far outside their own column's values: a field "
            f"{'dropped' if shift > 0 else 'added'} in that record, every value after it "
            f"read under its neighbour's name ({shifted.size} such record(s)); complete or "
            "delete the record in a copy of the file")
    merged = merged_dates.filled_down(raw, time_columns, time_format)
    if merged is not None:
        # a date on each day's first record only (merged cells; layouts48: refused before,
        # naming a stamp without its date)
        raw[time_columns[0]], filled = merged
        warnings.append(ReaderNote(
            f"input file {source!r}: column {time_columns[0]!r} writes the date on the "
            f"first record of each day only (a spreadsheet's merged cells): filled down on "
            f"{filled} record(s)"))
    stamp_text = join_time_columns(raw, time_columns)
    judged_format = time_format
    if (time_marks is not None and time_format.upper() == "ISO8601"
            and not offsets_in_stamps(stamp_text)):
        # "ISO8601" takes the clock from stamps that carry an offset; stamps without any
        # are read as local standard time, so a clock the file states is judged as under
        # a format without offsets (any such format: only its lack of labels counts)
        judged_format = _ISO_WITHOUT_OFFSETS
        named = name_conflict_message(time_columns, time_marks, judged_format, time_zone,
                                      utc_offset)
        if named:
            raise ConfigError(named)
    if time_marks is not None:
        # before the stamps are parsed: a clock the file states against [input] time_zone
        # is the cause where civil time then finds a stamp in the skipped spring hour
        _refuse_stated_otherwise(text, header, time_columns, delimiter, rows_before_header,
                                 rows_after_header, time_marks, judged_format, time_zone,
                                 utc_offset, source)
        used = {*time_columns, *mapping.values(), *flag_columns}
        zone_said = zone_column_message(
            {column: raw[column] for column in raw.columns
             if isinstance(column, str) and column not in used},
            judged_format, time_zone, utc_offset, source)
        if zone_said:
            raise TimestampError(zone_said)
    summaries, said = day_summaries.summary_lines(
        stamp_text, raw[[c for c in dict.fromkeys([*mapping.values(), *flag_columns])
                         if c in raw.columns and c not in time_columns]],
        time_format, tuple(missing) + tuple(flag_missing or ()), decimal, lines)
    if summaries.size:
        # a day's or a month's means or sums among the records, verified against them
        # (layouts47; refused before, naming them: layouts45)
        warnings.append(ReaderNote(f"input file {source!r}: {said}"))
        kept = np.setdiff1d(np.arange(len(raw)), summaries)
        raw = raw.iloc[kept].reset_index(drop=True)
        stamp_text = stamp_text.iloc[kept].reset_index(drop=True)
        lines = lines[kept]
    summary = footers.summary_rows(stamp_text, time_columns)
    if summary:
        # a spreadsheet's statistics under the records ("mean", "max"): no stamp, no
        # record (layouts38; refused before, naming them)
        kept = len(raw) - summary
        shown = ", ".join(repr(word) for word in dict.fromkeys(stamp_text.iloc[kept:]
                                                               .str.strip()))
        where = (f"last line ({int(lines[-1])}" if summary == 1 else
                 f"last {summary} lines ({int(lines[kept])} to {int(lines[-1])}")
        others = raw.iloc[kept:].drop(columns=[c for c in time_columns if c in raw.columns])
        if footers.dropped_rows_hold_no_record(stamp_text.iloc[kept:], others):
            warnings.append(ReaderNote(
                f"input file {source!r}: its {where}: {shown}) "
                f"{'has' if summary == 1 else 'have'} a word for a stamp, no record (a "
                "footer, or a spreadsheet's statistics under the records): dropped"))
        else:
            # values under a word that names no statistic: maybe records whose stamp was
            # lost, so a warning (review65: a note said "no record")
            warnings.append(
                f"input file {source!r}: its {where}: {shown}) "
                f"{'has' if summary == 1 else 'have'} a word for a stamp and values in other "
                "columns (records whose stamp was lost, or statistics under the records?): "
                "dropped, as no stamp places them")
        raw = raw.iloc[:kept].reset_index(drop=True)
        stamp_text = stamp_text.iloc[:kept].reset_index(drop=True)
        lines = lines[:kept]
    counted = (day_counts.as_clock(stamp_text, time_format)
               if not isinstance(time_columns, str) and len(time_columns) == 2 else None)
    if counted is not None:
        # minutes or seconds of the day beside a date (layouts47; refused before, naming
        # the count: layouts36)
        stamp_text, said = counted
        warnings.append(ReaderNote(f"input file {source!r}: column {time_columns[1]!r}: "
                                   f"{said}"))
    try:
        parsed = parse_stamps(stamp_text, time_format, time_columns=time_columns,
                              source=source, lines=lines, utc_offset=utc_offset,
                              time_zone=time_zone, rows_after_header=rows_after_header)
    except TimestampError:
        # a later file whose dates a spreadsheet rewrote (layouts50; refused before, naming
        # the layout that reads it, which would refuse the other files)
        own = (resaved_dates.file_layout(stamp_text, time_format)
               if first_header is not None else None)
        if own is None:
            raise
        parsed = parse_stamps(stamp_text, own, time_columns=time_columns, source=source,
                              lines=lines, utc_offset=utc_offset, time_zone=time_zone,
                              rows_after_header=rows_after_header)
        warnings.append(ReaderNote(
            f"input file {source!r}: no stamp reads as time_format = "
            f"{setting_text(time_format)} and every stamp reads as {setting_text(own)}, "
            "the one common layout that does (dates rewritten by a spreadsheet?): read so"))
        time_format = own
    warnings.extend(parsed.notes)
    newest_first = written_newest_first(parsed.stamps)
    # stamps unique as written too: civil time's repeated autumn hour is read by record
    # order, which a file sorted by another column does not keep
    out_of_order = not parsed.stamps.is_monotonic_increasing and not (
        newest_first and parsed.stamps[::-1].is_monotonic_increasing)
    order, sorted_note = record_order.time_order(
        parsed.stamps, raw.drop(columns=[c for c in time_columns if c in raw.columns])
    ) if out_of_order and stamp_text.is_unique else (None, "")
    newest_first = newest_first and order is None
    if sorted_note:
        # rows sorted by another column, whole days out of order (layouts47; refused
        # before, naming the fix: layouts45)
        warnings.append(ReaderNote(f"input file {source!r}: {sorted_note}"))
    if newest_first or order is not None:
        # a portal's export sorted newest first (layouts38; refused before with "sort a
        # copy of the file oldest first"), or the order `record_order` found: read in the
        # logger's order, parsed again so that civil time's repeated autumn hour is
        # resolved by that order
        order = np.arange(len(raw))[::-1] if newest_first else order
        raw = raw.iloc[order].reset_index(drop=True)
        stamp_text = stamp_text.iloc[order].reset_index(drop=True)
        lines = lines[order]
        parsed = parse_stamps(stamp_text, time_format, time_columns=time_columns,
                              source=source, lines=lines, utc_offset=utc_offset,
                              time_zone=time_zone, rows_after_header=rows_after_header)
    if time_marks is not None and len(time_columns) == 1:
        _refuse_paired_stamps(raw, stamp_text, time_columns[0], time_format, mapping,
                              flag_columns, time_marks, source)
    if rows_after_header:
        _refuse_skipped_record(path, text, header, time_columns, time_format, delimiter,
                               rows_before_header, rows_after_header, utc_offset, time_zone)
    values, missing_cells, nonfinite = {}, {}, {}
    read = {name: column for name, column in mapping.items() if (name, column) not in lacking}
    read |= {_flag_key(column): column for column in flag_columns
             if ("nee_flag", column) not in lacking}
    # decimal commas in the file's other columns: its whole numbers "1.034" are grouped
    comma_file = decimal == "," and any(
        raw[column].str.contains(",", regex=False).any() for column in read.values())
    flag_keys = {_flag_key(column) for column in flag_columns}
    missing_by_variable = missing_by_variable or {}
    judged = tuple(code for code in _numeric_codes(missing, decimal)
                   if math.isfinite(code) and abs(code) < JUDGED_MAGNITUDE)
    grouping = digit_grouping.may_hold(text, decimal, delimiter)
    for name, column in read.items():
        written = raw[column]
        raw[column], regrouped, grouped = (
            digit_grouping.ungrouped(written, decimal) if grouping else (written, 0, None))
        if regrouped:
            first_grouped = _first_in_file(lines, grouped)
            warnings.append(
                f"column {column!r} ({name.split(':')[0]}): {regrouped} cell(s) written with "
                "thousands separators where they cannot be a decimal mark (first "
                f"{written.iloc[first_grouped].strip()!r} on line {int(lines[first_grouped])} "
                "of its file): read without them")
        cells = raw[column]
        raw[column], fortran, lettered = fortran_numbers.e_exponents(cells, decimal)
        if fortran:
            first_fortran = _first_in_file(lines, lettered)
            warnings.append(
                f"column {column!r} ({name.split(':')[0]}): {fortran} cell(s) written with "
                f"Fortran's exponent letter D (first {cells.iloc[first_fortran].strip()!r} "
                f"on line {int(lines[first_fortran])} of its file): read as E")
        codes = flag_missing if (flag_missing is not None and name in flag_keys) else missing
        codes = tuple(codes) + tuple(missing_by_variable.get(name, ()))
        if flag_words is not None and name in flag_keys:
            # flags written as words, read as their codes (layouts49)
            raw[column], written_words = flag_word_codes(raw[column], flag_words, codes)
            for value, count in written_words.items():
                if flag_word_counts is not None:
                    flag_word_counts[value] = flag_word_counts.get(value, 0) + count
        numbers, n_missing, absurd = _numbers(raw[column], column, name, codes, decimal,
                                              source, lines, comma_file)
        if judged and name not in flag_keys:
            _refuse_ordinary_code(raw[column], column, name, codes, judged, decimal, source,
                                  lines, comma_file, parsed.stamps, time_marks, site,
                                  missing_by_variable.get(name, ()), code_cells)
        values[name], missing_cells[name], nonfinite[name] = numbers, n_missing, int(absurd.sum())
        if absurd.any():
            warnings.append(f"column {column!r} ({name.split(':')[0]}): {int(absurd.sum())} "
                            f"infinite or absurd value(s) (magnitude {ABSURD_MAGNITUDE:g} or "
                            "more) read as missing, first on data line "
                            f"{int(lines[_first_in_file(lines, absurd)])} of its file")
    # the unread columns that may be the storage-corrected NEE beside a turbulent flux
    # mapped (mistakes59), judged once on the records of every file and part joined
    # (review93: a series of monthly files each held too few nights to be judged)
    beside = (_storage_candidates(raw, values, missing, decimal,
                                  {*read.values(), *time_columns})
              if "nee" in values and "storage" not in mapping else {})

    # exact duplicate rows: same stamp and same value in every column read (none where
    # no stamp repeats, the usual file, which a hash of the stamps alone tells)
    if parsed.stamps.is_unique:
        duplicate = np.zeros(len(parsed.stamps), dtype=bool)
    else:
        table = pd.DataFrame(values)
        table.insert(0, "__stamp__", parsed.stamps)
        duplicate = table.duplicated(keep="first").to_numpy()
    keep = ~duplicate
    if not parsed.stamps[keep].is_unique:
        # a restart that wrote the last record again with cells missing (sensors warming
        # up; layouts54: refused before): completed from each other, as rows of
        # overlapping files are
        again = _restart_repeats(parsed.stamps, lines, values, keep)
        if again.size:
            for name, column in values.items():
                column = np.array(column, dtype=float)
                column[again - 1] = np.where(np.isnan(column[again - 1]), column[again],
                                             column[again - 1])
                values[name] = column
            keep[again] = False
            duplicate = duplicate.copy()
            duplicate[again] = True
            warnings.append(ReaderNote(
                f"input file {source!r}: {again.size} record(s) written again right after "
                "lines that are no records (a logger restart's header block?) with cells "
                "missing where the record before has values, every other value equal (line "
                f"{int(lines[again[0]])}, the record of line {int(lines[again[0] - 1])} "
                "again): read once, each cell from the record that has it"))
    if not parsed.stamps[keep].is_unique:
        # a record of no values at a stamp another record of the file has (a logger that
        # writes a placeholder at a restart, then the record; layouts55: refused before as
        # a stamp with different values)
        empty, flagged_otherwise = _placeholder_rows(parsed.stamps, values, keep)
        if empty.size:
            keep[empty] = False
            duplicate = duplicate.copy()
            duplicate[empty] = True
            warnings.append(ReaderNote(
                f"input file {source!r}: {empty.size} record(s) holding no value (every "
                "column read missing, a flag aside) at a stamp that another record of the "
                f"file has, with values (line {int(lines[empty[0]])}, stamp "
                f"{stamp_text.iloc[empty[0]]!r}): a placeholder, dropped"
                + (f"; {flagged_otherwise.size} of them flagged otherwise than the record "
                   f"(line {int(lines[flagged_otherwise[0]])}): the record's own flag kept"
                   if flagged_otherwise.size else "")))
    stamps = parsed.stamps[keep]
    try:
        check_order(stamps, stamp_text[keep].reset_index(drop=True), source, lines[keep],
                    time_zone=time_zone)
    except NonMonotonicTimestampError as error:
        if not newest_first:
            raise
        # "comes after" is said of the order read, from the last line up (review51: a
        # swapped pair in a newest-first file read as two lines in the wrong order)
        raise NonMonotonicTimestampError(
            f"input file {source!r} is written newest first, so it is read from its last "
            f"line up, and in that order {error}") from None
    return {
        "header_line": next(iter(leading_lines(text, rows_before_header + 1)[
            rows_before_header:]), "").strip(),
        "under_header": [line.strip() for line in leading_lines(
            text, rows_before_header + 1 + rows_after_header)[rows_before_header + 1:]],
        "header_rows": _header_rows(text, header, read, delimiter, rows_before_header,
                                    rows_after_header),
        "source": source, "encoding": used_encoding, "mapping": mapping,
        "flag_columns": flag_columns, "lacking": lacking, "file_columns": list(raw.columns),
        "stamps": stamps, "lines": lines[keep],
        "values": {name: column[keep] for name, column in values.items()},
        "storage_candidates": {column: found[keep] for column, found in beside.items()},
        "records_read": len(raw), "duplicate_rows": int(duplicate.sum()),
        "newest_first": newest_first, "header_trailing_delimiter": bool(unnamed_surplus),
        "missing_cells": missing_cells, "nonfinite_cells": nonfinite,
        "conversions": {"hour_24": parsed.hour_24, "utc_offset": parsed.offset_converted,
                        "daylight_saving": parsed.daylight_saving,
                        **({"utc_zone": parsed.utc_zone} if parsed.utc_zone else {}),
                        # only where it happened: earlier manifests have no such key
                        **({"rounded_to_minute": parsed.rounded_to_minute}
                           if parsed.rounded_to_minute else {}),
                        **({"date_only": parsed.date_only} if parsed.date_only else {}),
                        **({"whole_numbers": parsed.whole_numbers}
                           if parsed.whole_numbers else {}),
                        **({"decimal_fields": parsed.decimal_fields}
                           if parsed.decimal_fields else {})},
    }


def _restart_repeats(stamps: pd.DatetimeIndex, lines: np.ndarray, values: dict,
                     keep: np.ndarray) -> np.ndarray:
    """Rows (0-based) that repeat the stamp of the row right before them, kept in `keep`
    (no exact copy), with lines that are no records between the two (a restart's header
    block, emptied, or blank lines), the two rows completing each other: every value equal
    where both have one, and the repeat missing at least one value the row before has
    (a copy with more values than the first is not what a restart writes). Called only
    where a stamp repeats."""
    stamp_values = stamps.to_numpy()
    rows = np.flatnonzero(keep[1:] & keep[:-1] & (stamp_values[1:] == stamp_values[:-1])
                          & (np.diff(lines) > 1)) + 1
    if not rows.size or not values:
        return rows[:0]
    table = np.column_stack([np.asarray(column, dtype=float) for column in values.values()])
    later, earlier = table[rows], table[rows - 1]
    both = ~np.isnan(later) & ~np.isnan(earlier)
    agree = np.all(~both | (later == earlier), axis=1)
    fewer = np.all(~np.isnan(later) <= ~np.isnan(earlier), axis=1)
    return rows[agree & fewer]


def _placeholder_rows(stamps: pd.DatetimeIndex, values: dict, keep: np.ndarray
                      ) -> tuple[np.ndarray, np.ndarray]:
    """Rows (0-based) kept in `keep` that hold no value in any column read but flags, at a
    stamp that a kept row with a value has, and those of them whose flag differs from that
    row's. Called only where a stamp repeats.

    A flag on a row of no value flags nothing (a logger's placeholder at a restart often
    says "no data" in its flag column, the record after it "good"): the row is dropped all
    the same, the record keeps its own flag (round review96: a placeholder flagged 2
    before a record flagged 0 was refused as a stamp with different values, the message
    naming a change of stamping convention)."""
    nothing = np.zeros(0, dtype=int)
    if not values:
        return nothing, nothing
    names = list(values)
    table = np.column_stack([np.asarray(values[n], dtype=float) for n in names])
    flags = np.array([n.startswith("nee_flag") for n in names])
    present = ~np.isnan(table)
    empty = keep & ~present[:, ~flags].any(axis=1)
    stamp_values = stamps.to_numpy()
    shared = pd.Index(stamp_values).duplicated(keep=False)
    repeated = keep & shared & ~empty
    if not (empty & shared).any():
        return nothing, nothing
    first_full = pd.Series(np.flatnonzero(repeated),
                           index=stamp_values[repeated]).groupby(level=0).first()
    # only the empty rows at a repeated stamp are looked up (review96: every empty row of
    # a ten-year record with outages was, 0.66 s)
    rows = [row for row in np.flatnonzero(empty & shared)
            if stamp_values[row] in first_full.index]
    differing = []
    for row in rows:
        other = table[first_full[stamp_values[row]]]
        both = present[row] & ~np.isnan(other)
        if not np.all(table[row][both] == other[both]):
            differing.append(row)
    return np.asarray(rows, dtype=int), np.asarray(differing, dtype=int)


def _later_file_layout(path: Path, text: str, first_header, delimiter: str,
                       rows_before_header: int, rows_after_header: int, notes,
                       time_columns=()) -> tuple[str, int, int, int]:
    """``(text, rows_before_header, rows_after_header, lines borrowed)`` of a later file
    that lacks the first file's title lines or header (:mod:`fluxpart.later_files`;
    its name listed in `notes` under "titles" or "header"; layouts37: refused before),
    or whose header has more or fewer units lines under it than the first file's
    (under "units"; layouts39); the file's own where it lacks neither. `first_header`:
    the first file's header line and the lines under it that rows_after_header skips."""
    if first_header is None:
        return text, rows_before_header, rows_after_header, 0
    header, under = first_header
    text_lines = text.splitlines()
    if next(iter(text_lines[rows_before_header:]), "").strip() == header:
        first_count = sum(later_files.no_record(line, header, delimiter, time_columns)
                          for line in under)
        own = later_files.lines_under_header(text_lines, rows_before_header, delimiter,
                                             time_columns)
        if first_count == rows_after_header and own != rows_after_header:
            notes.setdefault("units", []).append(str(path))
            return text, rows_before_header, own, 0
        return text, rows_before_header, rows_after_header, 0
    above = later_files.title_lines_lacking(text_lines, header, rows_before_header)
    if above is not None:
        notes.setdefault("titles", []).append(str(path))
        own_under = [line.strip() for line in text_lines[above + 1:above + 1 + len(under)]]
        # the units lines written into the first file only too: none under this header
        return text, above, rows_after_header if own_under == under else 0, 0
    below = later_files.title_lines_added(text_lines, header, rows_before_header, delimiter)
    if below is not None:
        # a title line added above one file's header (layouts50; refused before as blocks
        # of different lengths above the header)
        notes.setdefault("added", []).append(str(path))
        own_under = [line.strip() for line in text_lines[below + 1:below + 1 + len(under)]]
        return text, below, rows_after_header if own_under == under else 0, 0
    if not later_files.headerless(text_lines, header, delimiter):
        return text, rows_before_header, rows_after_header, 0
    notes.setdefault("header", []).append(str(path))
    end = re.search(r"\r\n|\r|\n", text)
    return header + (end.group() if end else "\n") + text, 0, 0, 1


def _marked_header_warning(marked: list) -> ReaderNote:
    """The note for the files whose header line opened with a comment mark, read without
    it: `marked` holds (file, mark) pairs."""
    marks = " or ".join(repr(m) for m in dict.fromkeys(m for _, m in marked))
    where = (f"input file {marked[0][0]!r}: the header line opens" if len(marked) == 1 else
             f"{len(marked)} input files ({_file_list([f for f, _ in marked])}): the header "
             "line of each opens")
    return ReaderNote(f"{where} with the comment mark {marks} (as programs that write the "
                      "header as a comment do), read without it")


def _later_files_warnings(notes: dict, first: dict, rows_before_header: int,
                          delimiter: str) -> list:
    """One warning for the later files read from their own header line and one for those
    read under the first file's header (:func:`_later_file_layout`)."""
    found = []
    if notes.get("titles"):
        found.append(ReaderNote(
            f"{len(notes['titles'])} input file(s) ({_file_list(notes['titles'])}) have the "
            f"header line of {first['source']!r}, character for character, with fewer lines "
            f"above it than [input] rows_before_header = {rows_before_header} (title lines "
            "written into the first file only?): read from their header line (and without "
            "units lines where none stands under it)"))
    if notes.get("added"):
        found.append(ReaderNote(
            f"{len(notes['added'])} input file(s) ({_file_list(notes['added'])}) have the "
            f"header line of {first['source']!r}, character for character, with more lines "
            f"above it than [input] rows_before_header = {rows_before_header}, none of them "
            "a record (a title line added by hand or by an export?): read from their header "
            "line"))
    if notes.get("units"):
        found.append(
            f"{len(notes['units'])} input file(s) ({_file_list(notes['units'])}) have other "
            f"lines under the header line of {first['source']!r} than its "
            f"{len(first['under_header'])} (a units line written by one logger program and "
            "not by the other?): read past their own such lines, lines as wide as the header "
            "with no digit in a time column")
    if notes.get("header"):
        width = len(later_files.cells(first["header_line"], delimiter))
        found.append(
            f"{len(notes['header'])} input file(s) ({_file_list(notes['header'])}) have no "
            f"header line, their first line a record of the {width} fields the header of "
            f"{first['source']!r} names (a header written into the first file only?): read "
            "under that header, with no title or units lines; their line numbers as "
            "written")
    if notes.get("marked"):
        found.append(_marked_header_warning(notes["marked"]))
    return found


def _refuse_stated_otherwise(text: str, header: list, time_columns: tuple, delimiter: str,
                             rows_before_header: int, rows_after_header: int,
                             time_marks: str, time_format: str, time_zone, utc_offset,
                             source: str) -> None:
    """Refuse a file whose lines above the header, or whose cells under the time column's
    name, state another place in the interval or another clock than the settings read
    (see :func:`fluxpart.stamp_places.text_conflict_message`)."""
    if not rows_before_header and not rows_after_header:
        return
    statements = [(f"line {number} of {source!r}", line) for number, line in
                  enumerate(text.splitlines()[:rows_before_header], start=1)
                  if line.strip()]   # a blank line states nothing (a later part's: thousands)
    cells = _header_rows(text, header, {column: column for column in time_columns},
                         delimiter, rows_before_header, rows_after_header)
    for column, found in cells.values():
        statements += [(f"the cell under {column!r} on line {rows_before_header + 2 + k} of "
                        f"{source!r}", cell) for k, cell in enumerate(found) if cell]
    message = text_conflict_message(statements, time_marks, time_format, time_zone,
                                    utc_offset)
    if message:
        raise TimestampError(message)


def _refuse_paired_stamps(raw: pd.DataFrame, stamp_text: pd.Series, time_column: str,
                          time_format: str, mapping: dict, flag_columns, time_marks: str,
                          source: str) -> None:
    """Refuse a file whose unmapped column holds the other end of every interval where
    ``time_marks`` reads the time column at the wrong end (see
    :func:`fluxpart.stamp_places.paired_stamps_message`)."""
    used = {time_column, *mapping.values(), *flag_columns}
    others = {}
    for column in raw.columns:
        if column in used or not isinstance(column, str):
            continue
        parsed = parse_like(raw[column], time_format)
        if parsed is not None:
            others[column] = parsed
    if not others:
        return
    own = parse_like(stamp_text, time_format)
    if own is None:
        return
    message = paired_stamps_message(own, others, time_column, time_marks, source)
    if message:
        raise TimestampError(message)


def _header_rows(text: str, header: list, read: dict, delimiter: str,
                 rows_before_header: int, rows_after_header: int) -> dict:
    """The cells of each column read on the ``rows_after_header`` lines (its unit,
    statistic), ``{name: (column, cells)}``; empty without such lines."""
    if not rows_after_header:
        return {}
    text_lines = text.splitlines()[rows_before_header + 1:
                                   rows_before_header + 1 + rows_after_header]
    rows = [[cell.strip() for cell in (
        line.split() if delimiter == _WHITESPACE
        else next(csv.reader([line], delimiter=delimiter), []))] for line in text_lines]
    return {name: (column, tuple(row[header.index(column)] if header.index(column) < len(row)
                                 else "" for row in rows))
            for name, column in read.items() if column in header}


def _header_rows_warning(parts: list) -> str | None:
    """A warning naming the columns whose lines under the header (a units line) differ
    between input files: a unit changed during the record, which one ``[input.units]``
    cannot read, and which the value checks see only where the values give it away."""
    differing = []
    for name, (column, _) in parts[0]["header_rows"].items():
        seen: dict = {}
        for part in parts:
            other = part["header_rows"].get(name)
            if other is not None:
                # one unit in two spellings or two encodings ("°C", "Â°C") is no change
                key = tuple(same_unit_key(name.split(":")[0], cell) for cell in other[1])
                seen.setdefault(key, (other[1], part["source"]))
        if len(seen) > 1:
            (first, first_source), (second, second_source) = list(seen.values())[:2]
            differing.append(f"{column!r} ({name.split(':')[0]}) has "
                             f"{' | '.join(first)!r} in {first_source!r} but "
                             f"{' | '.join(second)!r} in {second_source!r}")
    if not differing:
        return None
    return ("the lines under the header ([input] rows_after_header: units, statistics) differ "
            f"between input files: {'; '.join(differing)}. A unit changed during the record "
            "is read with one [input.units] for every file: convert the values of one unit "
            "in a copy of those files (where only the spelling differs, nothing is wrong)")


#: A unit written at the end of a column name: "VPD [hPa]", "Tair (degC)", "co2_flux(umol/m2/s)".
_NAME_UNIT = re.compile(r"[\[(]\s*([^\[\]()]+?)\s*[\])]\s*$")


def _labelled_unit_warnings(parts: list, mapping: dict, units: dict) -> list:
    """Warnings naming the columns whose file writes another unit than the one read.

    A units line (``rows_after_header``) or a unit in brackets at the end of a column
    name that spells a unit the reader knows for that variable, with another conversion
    than the declared ``[input.units]`` (or, undeclared, the canonical unit): one of the
    two is wrong. The value checks catch the mix-ups the values give away (kPa for hPa
    against the humidity, °F); the others would be read without a word. Statistics
    ("Avg", "Smp") and units the reader does not know are not judged.
    """
    notes = []
    for name, column in mapping.items():
        declared = units.get(name)
        read_key = (same_unit_key(name, declared) if declared is not None
                    else ("unit", (1.0, 0.0), False))
        written = []
        found = _NAME_UNIT.search(str(column))
        if found and not found[1].isdigit():
            # "RH (1)" numbers a sensor: a digit alone is no unit written in a name
            written.append((found[1], "its name"))
        for part in parts:
            cells = part["header_rows"].get(name, (None, ()))[1]
            written += [(cell, f"the units line of {part['source']!r}") for cell in cells if cell]
        read_text = f"{declared or units_for(name)[0]!r} " + (
            f"([input.units] {name} = {setting_text(declared)})" if declared
            else f"(no [input.units] {name}: its default)")
        for cell, where in written:
            # "(mg m-2 s-1)", "[kPa]": a units row's marks are no part of the unit
            # (review73: such labels went unjudged)
            cell = header_cells.enclosed_unit(cell)
            key = same_unit_key(name, cell)
            note = (flux_rate_labels.unreadable_rate_note(name, column, cell, where,
                                                          read_key[1][0], read_text)
                    if key[0] == "text" and read_key[0] == "unit" and not read_key[2]
                    else None)
            if note:        # a CO2 flux unit the reader cannot convert (round mistakes36)
                notes.append(note)
                break
            if key[0] == "unit" and key != read_key:
                notes.append(
                    f"column {str(column)!r} ({name}) is labelled {cell!r} by {where} but "
                    f"read as {declared or units_for(name)[0]!r} "
                    + (f"([input.units] {name} = {setting_text(declared)})" if declared
                       else f"(no [input.units] {name}: its default)")
                    + f": one of them is wrong; where the label is right, set [input.units] "
                    f"{name} = {setting_text(unit_spelling(name, cell))}")
                break
    return notes


def _utf8_hint(header: list, encoding: str) -> str:
    """A hint where names of a header decoded with a single-byte `encoding` are UTF-8 text
    ('Â°C' for '°C': each non-ASCII character read as two), else ""."""
    if encoding.replace("_", "-").lower().startswith(("utf-8", "utf-16", "utf8", "utf16")):
        return ""
    for name in header:
        try:
            fixed = str(name).encode(encoding).decode("utf-8")
        except (UnicodeEncodeError, UnicodeDecodeError, LookupError):
            continue
        if fixed != name:
            return (f"; the header is UTF-8 text read as {encoding} ({name!r} is {fixed!r} in "
                    "UTF-8): set [input] encoding = \"utf-8\" (or leave encoding out)")
    return ""


def _refuse_skipped_record(path: Path, text: str, header: list, time_columns: tuple,
                           time_format: str, delimiter: str, rows_before_header: int,
                           rows_after_header: int, utc_offset, time_zone) -> None:
    """Raise where a line skipped as one of ``rows_after_header`` is a record: its stamp
    reads under ``time_format`` (a file without the units line its neighbours have,
    whose first record would be dropped unnoticed)."""
    text_lines = text.splitlines()[:rows_before_header + 1 + rows_after_header]
    for number in range(rows_before_header + 1, len(text_lines)):
        line = text_lines[number]
        cells = (line.split() if delimiter == _WHITESPACE
                 else next(csv.reader([line], delimiter=delimiter), []))
        cells = [cell.strip() for cell in cells]
        if len(cells) < len(header) or any(c not in header for c in time_columns):
            continue
        stamp = pd.Series([" ".join(cells[header.index(c)] for c in time_columns)])
        try:
            parse_stamps(stamp, time_format, time_columns=time_columns, source=str(path),
                         lines=np.array([number + 1]), utc_offset=utc_offset,
                         time_zone=time_zone)
        except TimestampError:
            continue
        raise InputFileError(
            f"input file {str(path)!r}: line {number + 1} ({_shown_line(line)!r}), skipped as "
            f"one of [input] rows_after_header = {rows_after_header}, is a record (its stamp "
            f"{stamp.iloc[0]!r} reads under time_format): the file has fewer lines under its "
            "header than the setting skips (no units line?); give every input file the same "
            "layout in a copy")


#: Mapped variables a file among several may lack, read as missing for its records: a
#: sensor added or removed during the record (a soil probe installed in the second year).
#: Required variables, the site flag (its records would enter unjudged), storage (every
#: NEE of the file would be missing) and PPFD are refused instead; ``rh`` only where
#: ``vpd`` is read, not derived from it.
_MAY_LACK = ("tsoil", "rh")


def _fill_lacking(parts: list, mapping: dict, time_columns: tuple,
                  warnings: list) -> tuple[list, dict, bool]:
    """Give the records of files lacking an optional mapped column missing values.

    Returns the parts with NaN columns in place of the lacking ones, for each such
    variable ``(column, files lacking it, records read as missing)``, and whether files
    of one period holding different columns are joined (their columns lacking from each
    other's files filled alike, the rows of a stamp then completing each other). Raises where a
    column is in no file, is not optional (:data:`_MAY_LACK`), or where a file lacking it
    has an unmapped column of a similar name (a renamed column, not a missing sensor).
    """
    lacking = {}
    for part in parts:
        for key in part["lacking"]:
            lacking.setdefault(key, []).append(part)
    absent = {}
    joined: dict = {}
    for (name, column), without in lacking.items():
        having = [part["source"] for part in parts if (name, column) not in part["lacking"]]
        first = without[0]
        taken = (set(mapping.values()) | set(first["flag_columns"]) | set(time_columns)) - {
            column}
        free = [c for c in first["file_columns"] if c not in taken]
        near = _near(column, free)
        lacks = _file_list([part["source"] for part in without])
        # a renamed column is among the lacking file's unmapped ones: named, for the user
        unmapped = (f", whose unmapped columns are {_names(free)}" if free
                    else ", whose every column is read")
        setting = f"[input.columns] {name} = {setting_text(column)}"
        if not having:
            raise MissingColumnError(f"{setting}: no such column in any of the {len(parts)} "
                                     f"input files{near}; "
                                     f"{_columns_listing(first['file_columns'])} in "
                                     f"{first['source']!r}")
        optional = name in _MAY_LACK and (name != "rh" or "vpd" in mapping)
        found = f"{setting}: the column is in {_file_list(having)} but not in {lacks}"
        if _same_period(without, [part for part in parts if (name, column)
                                  not in part["lacking"]]):
            # files of one period holding different columns (a flux logger and a
            # meteorological one): the rows of a stamp complete each other
            other_step = _other_interval(without, [part for part in parts if (
                name, column) not in part["lacking"]])
            if other_step:
                raise MissingColumnError(
                    f"{found}, which covers the same period {other_step}: files of one "
                    "period holding different columns (a flux and a meteorological "
                    "logger?) are joined by stamp, which needs the same record interval in "
                    "each (joined as they are, the records of one file would lack the "
                    "other's variables); bring the files to one record interval in a copy (average "
                    "the shorter records to the longer interval)")
            _refuse_clock_shift(without, [part for part in parts if (
                name, column) not in part["lacking"]], found)
            joined.setdefault(lacks, []).append(name)
            continue
        example = repr(free[0]) if len(free) == 1 else '"..."'
        renamed = ("if one of them is the same quantity renamed, list its name in "
                   f"[input.other_names] ({name} = [{example}]) or give it the same name "
                   "in every file (in a copy); else " if free else "")
        other_stamps = _same_span_other_stamps(without, [part for part in parts if (
            name, column) not in part["lacking"]])
        offset = _grid_offset(without, [part for part in parts if (
            name, column) not in part["lacking"]]) if other_stamps else ""
        if offset:
            raise MissingColumnError(
                f"{found}, which covers the same period {offset}: files of one period "
                "holding different columns (a flux and a meteorological logger?) are joined "
                "by stamp, which needs the same stamps in each; loggers that stamp their "
                "records at other points of the interval (start, middle, end) take one "
                "[input] time_marks for every file: shift that file's stamps in a copy")
        if other_stamps:
            raise MissingColumnError(
                f"{found}, which covers the same period with stamps of its own "
                f"({other_stamps}): files of one period holding different columns (a flux "
                "and a meteorological logger?) are joined by stamp, which needs the same "
                "record interval and stamps in each; average that file to the others' "
                "records in a copy")
        if near:
            suggested = re.search(r"did you mean ('[^']+')", near)
            listed = (f"List its other name in [input.other_names] ({name} = "
                      f"[{suggested.group(1)}]), give" if suggested and name != "nee_flag"
                      else "Give")
            raise MissingColumnError(
                f"{found}, which has an unmapped column of a similar name{near}: a column "
                f"renamed between files? {listed} the column the same name in every file "
                "(in a copy), or read the files in separate runs")
        if not optional:
            why = {"nee_flag": "records without the site's flag would enter unjudged",
                   "storage": "every NEE of a file without storage would be missing"}.get(
                       name, f"{name} is needed in every record")
            remove = ("" if name in REQUIRED else
                      f", or remove {name} from [input.columns] to read no file's {name}")
            raise MissingColumnError(
                f"{found}{unmapped}; {why}: {renamed}add the column to {lacks} (empty cells "
                f"where there is no value){remove}")
        records = sum(len(part["stamps"]) for part in without)
        absent[name] = (column, tuple(part["source"] for part in without), records)
        rename = ("; if one of those columns is it renamed, list its name in "
                  f"[input.other_names] {name}, or give it the same name in every file (in "
                  "a copy)" if free else "")
        warnings.append(f"{name}: column {column!r} is in {_file_list(having)} but not in "
                        f"{lacks}{unmapped}; its {records} record(s) there are read as missing "
                        f"{name} (as if the column were there with empty cells){rename}; to "
                        f"use no file's {name}, remove it from [input.columns]")
    if joined:
        warnings.append("files of one period holding different columns (a flux and a "
                        "meteorological logger?), their rows joined by stamp: "
                        + "; ".join(f"{', '.join(names)} not in {lacks}"
                                    for lacks, names in joined.items()))
    filled = []
    for part in parts:
        names = [_flag_key(column) if name == "nee_flag" else name
                 for name, column in part["lacking"]
                 if name in absent or any(name in names for names in joined.values())]
        filled.append(part | {
            "values": part["values"] | {name: np.full(len(part["stamps"]), np.nan)
                                        for name in names},
            "missing_cells": part["missing_cells"] | dict.fromkeys(names, 0),
            "nonfinite_cells": part["nonfinite_cells"] | dict.fromkeys(names, 0)})
    return filled, absent, bool(joined)


def _same_span_other_stamps(without: list, having: list) -> str:
    """Where the files of `having` hold records among those of a file of `without` (a
    quarter as many or more within its first and last stamp; our choice) though it shares
    few of their stamps (another record interval or clock grid; called only where
    :func:`_same_period` is false), its typical step and first stamp, e.g. ``"every 10
    minutes from 2021-01-01 00:10"``; else ''. A file filling another's gap has none of
    the other's records within it."""
    if not having:
        return ""
    others = np.sort(np.concatenate([part["stamps"].to_numpy() for part in having]))
    for part in without:
        stamps = part["stamps"]
        if len(stamps) < 2:
            continue
        # the other files' records among this file's own, not around a gap it fills
        within = (np.searchsorted(others, stamps.max().to_datetime64(), side="right")
                  - np.searchsorted(others, stamps.min().to_datetime64(), side="left"))
        if within >= 0.25 * len(stamps):
            step = float(np.median(np.diff(stamps.to_numpy())) / np.timedelta64(1, "m"))
            return f"every {step:g} minutes from {stamps.min()} in {part['source']!r}"
    return ""


def _refuse_clock_shift(without: list, having: list, found: str) -> None:
    """Refuse files of one period holding different columns whose spans begin and end
    a whole number of records apart (:func:`joined_clocks.span_shift_minutes`): the two
    loggers' clocks differ, and joined as written every record would pair one logger's
    values with the other's of another interval."""
    own = np.concatenate([part["stamps"].to_numpy() for part in without])
    others = np.concatenate([part["stamps"].to_numpy() for part in having])
    step = _median_step(others) or 0
    shift = span_shift_minutes(own, others, step)
    if shift is None:
        return
    side = "after" if shift > 0 else "before"
    records = round(abs(shift) / step)
    earlier, later = ((having, without) if shift > 0 else (without, having))
    raise MissingColumnError(
        f"{found}, which covers the same period with its first and last stamps both "
        f"{abs(shift):g} minutes {side} those of {_file_list([p['source'] for p in having])}: "
        f"the two loggers' clocks differ by {abs(shift):g} minutes (one on UTC, one on "
        "local time, or one set off?) or one stamps its records at the interval's start, "
        "the other at its end, and joined by stamp every record would pair the "
        "values of one file with the other's of another interval; or the loggers ran "
        f"{abs(shift):g} minutes apart from start to end. Shift the stamps of the file "
        "whose clock was off in a copy (the loggers' logs tell which; the file holding Rg "
        "shows its clock against the sun in `fluxpart check` once joined right); where "
        "the loggers did run apart, remove from a copy the record(s) at one end that only "
        f"one file holds (the first {records} of "
        f"{_file_list([p['source'] for p in earlier])} or the last {records} of "
        f"{_file_list([p['source'] for p in later])}), and the files are joined by stamp")


def _grid_offset(without: list, having: list) -> str:
    """Where a file of `without` has the record interval of the files of `having` but its
    stamps sit a fixed part of it away from theirs (a meteorological logger stamping the
    middle of each interval beside a flux logger stamping its end: 15 minutes at 30), e.g.
    ``"with the same 30-minute records, its stamps 15 minutes before those of 'flux.csv'"``;
    else ''. Judged by the offset of 90 % of its stamps or more (our choice) from the
    others' grid."""
    others = np.unique(np.concatenate([part["stamps"].to_numpy() for part in having]))
    step = _median_step(others)
    if not step:
        return ""
    for part in without:
        own = _median_step(part["stamps"].to_numpy())
        if own != step:
            continue
        stamps = np.unique(part["stamps"].to_numpy())
        after = np.searchsorted(others, stamps, side="left").clip(0, len(others) - 1)
        late = (others[after] - stamps) / np.timedelta64(1, "m")
        late = late[(late > 0) & (late < step)]
        if late.size < 0.9 * stamps.size:
            continue
        values, counts = np.unique(late, return_counts=True)
        if counts.max() < 0.9 * stamps.size:
            continue
        before = float(values[counts.argmax()])
        return (f"with the same {step:g}-minute records, its stamps {before:g} minutes "
                f"before those of {_file_list([p['source'] for p in having])} (or "
                f"{step - before:g} after)")
    return ""


def _median_step(stamps) -> float | None:
    """The typical step [minutes] between the sorted distinct `stamps`, or None for
    fewer than two."""
    values = np.unique(np.asarray(stamps, dtype="datetime64[s]"))
    if values.size < 2:
        return None
    return float(np.median(np.diff(values)) / np.timedelta64(1, "m"))


def _other_interval(without: list, having: list) -> str:
    """Where a file of `without` holds records at another typical step than the files of
    `having` together (an hourly meteorological file whose stamps are every other one of
    half-hourly flux files), e.g. ``"with records every 60 minutes in 'met.csv', where
    'flux.csv' hold them every 30 minutes"``; else ''. Called for files of one period
    (:func:`_same_period`), whose stamps share a grid."""
    if not having:
        return ""
    others = _median_step(np.concatenate([part["stamps"].to_numpy() for part in having]))
    for part in without:
        own = _median_step(part["stamps"].to_numpy())
        if own is not None and others is not None and abs(own - others) > 0.5:
            return (f"with records every {own:g} minutes in {part['source']!r}, where "
                    f"{_file_list([other['source'] for other in having])} hold them every "
                    f"{others:g} minutes")
    return ""


def _same_period(without: list, having: list) -> bool:
    """Whether most stamps (half or more) of every file in `without` are in a file of
    `having`: files of one period holding different columns, not a column absent from a
    period (our choice of share: loggers of one tower lose records apart)."""
    if not having:
        return False
    stamps = np.concatenate([part["stamps"].to_numpy() for part in having])
    return all(len(part["stamps"]) and np.isin(part["stamps"].to_numpy(), stamps).mean() >= 0.5
               for part in without)


def _names(columns: list, shown: int = 8) -> str:
    """``'a', 'b'`` or ``'a', 'b', ... and 5 more``: column names for a message."""
    quoted = ", ".join(repr(str(c)) for c in columns[:shown])
    return quoted + (f" and {len(columns) - shown} more" if len(columns) > shown else "")


def _file_list(sources: list) -> str:
    """``'a.csv'``, ``'a.csv' and 'b.csv'`` or ``'a.csv', 'b.csv' and 3 more files``."""
    quoted = [repr(str(source)) for source in sources]
    if len(quoted) > 3:
        return f"{', '.join(quoted[:2])} and {len(quoted) - 2} more files"
    return quoted[0] if len(quoted) == 1 else f"{', '.join(quoted[:-1])} and {quoted[-1]}"


def _complete_overlap(stamps, lines, sources, values):
    """Merge the rows of a stamp that overlapping files give twice where they only complete
    each other: every column equal or missing in one of them (a logger file copied while a
    record was being written, a cell missing in one download). Rows that disagree in a
    value both give are left for :func:`_combine` to refuse. Returns the stamps, lines,
    sources and values with each such stamp once (the first row's line, every column's
    value from whichever row has it), the count of rows merged away, the count of
    stamps so merged and where the first of them was (``"<stamp> on line L of 'a.csv'
    and line M of 'b.csv'"``; None where none was).
    """
    index = pd.Index(stamps)
    repeated = index.duplicated(keep=False)
    if not repeated.any():
        return stamps, lines, sources, values, 0, 0, None
    table = pd.DataFrame({name: column[repeated] for name, column in values.items()})
    grouped = table.groupby(pd.Index(stamps[repeated]))
    complementary = (grouped.nunique() <= 1).all(axis=1)
    if not complementary.any():
        return stamps, lines, sources, values, 0, 0, None
    filled = grouped.first()                        # the first value present in each column
    joinable = repeated & index.isin(complementary.index[complementary])
    first_of = joinable & ~index.duplicated(keep="first")
    keep = ~joinable | first_of
    for name in values:
        column = values[name].copy()
        column[first_of] = filled.loc[stamps[first_of], name].to_numpy()
        values[name] = column
    dropped = int((~keep).sum())
    # a stamp in three files drops two rows: the warning counts stamps, and names the
    # first one's rows
    first = np.flatnonzero(joinable & (stamps == stamps[np.flatnonzero(first_of)[0]]))
    where = (f"{pd.Timestamp(stamps[first[0]])} on "
             + " and ".join(f"line {int(lines[row])} of {sources[row]!r}" for row in first))
    return (stamps[keep], lines[keep], sources[keep],
            {name: column[keep] for name, column in values.items()}, dropped,
            int(first_of.sum()), where)


#: Shifts of one file's stamps tried on overlapping files that disagree [intervals]
#: (1 to 4 records: a start/end or middle convention, a clock set off) and [minutes]
#: (an hour or two: UTC or summer time against local standard time)
_OVERLAP_SHIFT_RECORDS = (1, 2, 3, 4)
_OVERLAP_SHIFT_MINUTES = (60.0, 120.0)
#: Share of the shifted overlap's stamps whose rows must be equal for a shift to be
#: named (our choice: a few rows may differ where a download rewrote its last record)
_OVERLAP_SHIFT_SHARE = 0.95


def _other_step_overlap(parts: list, source_a: str, source_b: str) -> str:
    """The fix where two overlapping files that disagree hold records at different steps.

    A logger writes several tables (the records of each averaging period, hourly and
    daily values) to files of similar names, and a pattern in [input] path catches them
    all ("Mast_*.dat" over "Mast_Flux30.dat" and "Mast_Flux60.dat"): every stamp of the
    coarser table is also a stamp of the finer one, with the value of another period.
    The refusal said "remove one copy of the overlap", which names no copy; it now names
    both steps and the fix.

    Parameters
    ----------
    parts : list of dict
        The files read (``"source"``, ``"stamps"``).
    source_a, source_b : str
        The two files of the first stamp that disagrees.

    Returns
    -------
    str
        The fix naming both files' typical steps [minutes], or "" where they agree
        within half a minute (or a file holds fewer than two stamps).

    References
    ----------
    A record's value is the mean (or sum) over its own averaging period, so tables of
    two periods hold different values at a shared stamp (common practice).
    """
    steps, regular = {}, {}
    for part in parts:
        if part["source"] in (source_a, source_b):
            stamps = np.unique(np.asarray(part["stamps"].to_numpy(), dtype="datetime64[s]"))
            steps[part["source"]] = _median_step(stamps)
            if stamps.size >= 2:
                gaps = np.diff(stamps) / np.timedelta64(1, "m")
                # a table of its own period, not a file with records missing: nine in
                # ten of its steps are its typical one (our choice of share)
                regular[part["source"]] = np.mean(gaps == np.median(gaps)) >= 0.9
    step_a, step_b = steps.get(source_a), steps.get(source_b)
    if step_a is None or step_b is None or abs(step_a - step_b) <= 0.5:
        return ""
    if not regular[source_a if step_a > step_b else source_b]:
        return ""
    coarse, fine = (source_a, source_b) if step_a > step_b else (source_b, source_a)
    return (f"{coarse!r} holds records every {max(step_a, step_b):g} minutes, "
            f"{fine!r} every {min(step_a, step_b):g} minutes: tables of two averaging "
            "periods (a logger's hourly or daily table caught by the pattern in [input] "
            "path?), whose values at a shared stamp differ; list only the files of one "
            "record interval in path (a narrower pattern or a list of files)")


def _shifted_overlap(parts: list, source_a: str, source_b: str) -> str:
    """The fix where two overlapping files agree once one file's stamps are shifted.

    Two downloads of one logger whose overlap disagrees at every stamp, but agrees row
    by row with the second file's stamps moved by whole records or an hour: the stamps
    changed their convention (interval start against end) or clock between the files.
    The refusal blamed the overlap ("remove one copy") or two loggers' files sharing
    columns; it now names the shift.

    Parameters
    ----------
    parts : list of dict
        The files read (``"source"``, ``"stamps"``, ``"values"``).
    source_a, source_b : str
        The two files of the first stamp that disagrees.

    Returns
    -------
    str
        The fix naming the shift [minutes], or "" where no shift makes the overlap
        agree.

    References
    ----------
    Loggers stamp a record at the start, middle or end of its averaging interval, and
    a clock kept on summer time or UTC runs an hour or two from local standard time
    (common practice); the shifts tried are those.
    """
    by_source = {part["source"]: part for part in parts}
    if source_a not in by_source or source_b not in by_source:
        return ""

    def table(part):
        frame = pd.DataFrame(part["values"], index=pd.DatetimeIndex(part["stamps"]))
        return frame[~frame.index.duplicated(keep="first")]

    first, second = table(by_source[source_a]), table(by_source[source_b])
    overlap = first.index.intersection(second.index)
    step = _median_step(first.index)
    if step is None or overlap.size < 48:
        return ""
    shifts = sorted({k * step for k in _OVERLAP_SHIFT_RECORDS} | set(_OVERLAP_SHIFT_MINUTES))
    for minutes in [sign * m for m in shifts for sign in (1, -1)]:
        moved = second.copy()
        moved.index = second.index + pd.Timedelta(minutes=minutes)
        common = first.index.intersection(moved.index)
        if common.size < 48:
            continue
        left, right = first.loc[common].to_numpy(), moved.loc[common].to_numpy()
        equal = ((left == right) | (np.isnan(left) & np.isnan(right))).all(axis=1)
        if equal.mean() >= _OVERLAP_SHIFT_SHARE:
            direction = "later" if minutes > 0 else "earlier"
            return (f"the overlap agrees row by row once the stamps of {source_b!r} are read "
                    f"{abs(minutes):g} minutes {direction}: the two files stamp the same "
                    "records differently (the start against the end of the interval, or a "
                    "clock set another way between the downloads?); correct one file's "
                    "stamps in a copy")
    return ""


def _boundary_shift(parts: list, stamp: pd.Timestamp) -> str:
    """The fix where two consecutive files meet in one stamp (the last of one, the first
    of the other) and one of them leaves the record after (or before) it empty: that
    file's stamps sit one record early (late) against its neighbours (a file stamped at
    the other end of the interval), else ``""``. Known truth: month files of one
    logger, one of them written with start stamps (tests/test_robustness_layouts22.py)."""
    present = set()
    for part in parts:
        present.update(pd.DatetimeIndex(part["stamps"]))
    for part in parts:
        own = pd.DatetimeIndex(part["stamps"])
        if len(own) < 3:
            continue
        step = pd.Timedelta((own[1:] - own[:-1]).median())
        if own[0] == stamp and own[-1] + step not in present and \
                own[-1] + 2 * step in present:
            hole, direction, gap = own[-1] + step, "early", "after its last"
        elif own[-1] == stamp and own[0] - step not in present and \
                own[0] - 2 * step in present:
            hole, direction, gap = own[0] - step, "late", "before its first"
        else:
            continue
        minutes = step / pd.Timedelta(minutes=1)
        return (f"{part['source']!r} meets its neighbour in this one stamp and leaves stamp "
                f"{hole} {gap} record empty, so its stamps sit one record ({minutes:g} "
                f"minutes) {direction} against the other files': it marks the other end "
                "of the interval (a logger program or export changed), or the other files "
                "do; give the files one convention in a copy (the one [input] time_marks "
                "names) rather than remove the stamp")
    return ""


def _flag_scale_message(flags: list, flag_columns: list, flag_accept, rejected: int,
                        judged: int, words: tuple | None = None,
                        word_counts: dict | None = None) -> str:
    """The refusal where the site flag rejects nearly every record, naming both readings.

    A flag of the other scale (2 or 1 for a good record, 0 for a bad one) under
    ``flag_accept = [0]`` keeps the bad records only; a site whose own checks reject
    nearly every record has no budget to give, since towers keep about 65 % of their
    records in all (Falge et al. 2001 (m)). Either way the setting decides, so the
    refusal names each flag value with its count.

    Parameters
    ----------
    flags : list of numpy.ndarray
        The flag columns' values as read, at the records with an NEE value [-].
    flag_columns : list of str
        Their names in the file.
    flag_accept : sequence of float
        ``[input] flag_accept`` [-].
    rejected, judged : int
        Records with an NEE value the flags reject, and those with a flag [-].
    words : tuple of str, optional
        `flag_accept` where it lists words: the flags are their codes
        (:mod:`fluxpart.flag_words`), named as the words; `word_counts` (value written
        -> records) names the values not listed.

    Returns
    -------
    str
        The one-line refusal.

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology, 107, 43-69 (m).
    """
    held = np.concatenate([f[np.isfinite(f)] for f in flags])
    values, counts = np.unique(held, return_counts=True)
    order = np.argsort(-counts, kind="stable")[:6]
    shown = ", ".join(f"{flag_shown(values[i], words, word_counts)} in {counts[i]}" for i in order)
    return (f"nee_flag: {rejected} of {judged} records with an NEE value "
            f"({100 * (rejected / judged):.1f} %) are rejected by {' + '.join(flag_columns)} with "
            f"[input] flag_accept = {list(flag_accept)} "
            f"(the flags hold {shown} records"
            f"{'; ' + counted if (counted := many_values_text(flags, flag_columns)) else ''}): either "
            "flag_accept names the values of bad "
            "records (a flag of the other scale, a higher value for a better record), or the "
            "site's own checks reject nearly every record, which leaves no budget (towers "
            "keep about 65 % of their records); set [input] flag_accept to the values that "
            "mean a good record")


def _in_brackets(text: str) -> str:
    """`text` as " (text)", or '' where it is empty."""
    return f" ({text})" if text else ""


def _boundary_marks(parts: list, stamp: pd.Timestamp) -> str:
    """The two readings where consecutive files share one stamp only, else ``""``.

    The last stamp of one file is the first of the next, and no other stamp of either is
    in the other. Where the convention of the stamps changed between the files (a logger
    program or export changed from end to start marks), the two rows are two records,
    and every record of one side sits one record off against the other's; where a
    download rewrote the record it was cut in, they are one record written twice. The
    refusal said "remove one copy of the overlap" (after which one side is read one
    record off without a word) or, where one row lacks NEE, named two loggers' files
    joined by stamp. :func:`_boundary_shift` names the file where a record left empty
    at its other end shows which side changed; this names both readings where none does
    (the change persists to the record's end). At midnight the calendar adds what each
    file's stamps read as: its last day ending at 24:00 (end marks), its first day
    starting at 00:00 (start marks).

    Parameters
    ----------
    parts : list of dict
        The files read (``"source"``, ``"stamps"``).
    stamp : pandas.Timestamp
        The first stamp that disagrees.

    Returns
    -------
    str
        The fix naming both files, both readings and the step [minutes].

    References
    ----------
    Loggers stamp a record at the start or end of its averaging interval, and a file of
    whole days so stamped runs 00:00 .. 23:30 or 00:30 .. 24:00 (common practice).
    """
    ending, beginning = [], []
    for part in parts:
        own = pd.DatetimeIndex(part["stamps"])
        if len(own) < 2:
            continue
        if own[-1] == stamp and own[0] != stamp:
            ending.append((part, own))
        elif own[0] == stamp and own[-1] != stamp:
            beginning.append((part, own))
    if len(ending) != 1 or len(beginning) != 1:
        return ""
    (first, own_a), (second, own_b) = ending[0], beginning[0]
    if own_a.intersection(own_b).size != 1:
        return ""
    step = _median_step(own_b.to_numpy())
    if step is None:
        return ""
    a, b = first["source"], second["source"]
    calendar = ""
    if stamp == stamp.normalize():
        day = (stamp - pd.Timedelta(days=1)).date()
        calendar = (f" (midnight: the first ends {day} at 24:00, as end marks do, the "
                    f"second begins {stamp.date()} at 00:00, as start marks do)")
    return (f"{a!r} and {b!r} share this one stamp, the last of the first and the first "
            f"of the second{calendar}: either the stamps mark the other end of the interval "
            "from the second on (a logger program or export changed), so the two rows are two "
            f"records and every record on one side is read one record ({step:g} minutes) "
            "off, or the two rows are one record written twice (a download rewrote it); "
            "where the marks changed, give the files one convention in a copy (the one "
            "[input] time_marks names), else remove one of the two rows")


def _rounding_only(stamps: np.ndarray, sources: np.ndarray, values: dict,
                   names: list) -> tuple | None:
    """``(coarse file, fine file)`` where every repeated stamp's values differ only by
    rounding, else None.

    Two copies of one record, one written with fewer decimals (a file re-exported with
    another number format), differ in every value by at most half a unit of the
    coarser copy's last decimal (0 to 6 decimals), whichever way the half was rounded.
    The values alone cannot say which copy is the logger's, so this only names the
    cause. Values after unit conversion are compared (a factor of 10 or 1000 moves the
    decimals, not the test).

    References
    ----------
    Common practice: a number written to d decimals lies within half a unit of its d-th
    decimal of the value it stands for.
    """
    repeated = np.flatnonzero(pd.Index(stamps).duplicated(keep=False))
    if repeated.size < 2 or repeated.size % 2:
        return None
    pairs = repeated.reshape(-1, 2)
    if not (stamps[pairs[:, 0]] == stamps[pairs[:, 1]]).all():
        return None                                  # a stamp in three copies
    coarse = set()
    for name in names:
        one, other = values[name][pairs[:, 0]], values[name][pairs[:, 1]]
        both = ~(np.isnan(one) | np.isnan(other)) & (one != other)
        for x, y, i in zip(one[both], other[both], pairs[both], strict=True):
            for digits in range(7):
                half = 0.5 * 10.0 ** -digits * (1 + 1e-6)
                if _has_decimals(x, digits) and abs(x - y) <= half:
                    coarse.add((sources[i[0]], sources[i[1]]))
                    break
                if _has_decimals(y, digits) and abs(x - y) <= half:
                    coarse.add((sources[i[1]], sources[i[0]]))
                    break
            else:
                return None
    return coarse.pop() if len(coarse) == 1 else None


def _has_decimals(value: float, digits: int) -> bool:
    """True where `value` is written with at most `digits` decimals (within 1e-9)."""
    return abs(value - round(value, digits)) <= 1e-9 * max(1.0, abs(value))


def _second_pass_heads(parts: list, time_zone: str, utc_offset: float,
                       warnings: list) -> list:
    """Read the repeated autumn hour across civil-time files cut inside it: the stamps
    heading a file that are that hour's second pass, read as its first in their own
    file (:func:`civil_splits.second_pass_head`), moved to standard time and named."""
    order = sorted(range(len(parts)), key=lambda i: (parts[i]["stamps"].min()
                                                     if len(parts[i]["stamps"]) else
                                                     pd.Timestamp.max))
    parts = list(parts)
    for before, after in zip(order, order[1:], strict=False):
        stamps = pd.DatetimeIndex(parts[after]["stamps"])
        head, step = second_pass_head(parts[before]["stamps"], stamps, time_zone,
                                      utc_offset)
        if not head:
            continue
        moved = stamps[:head] + pd.Timedelta(hours=step)
        parts[after] = parts[after] | {"stamps": moved.append(stamps[head:])}
        warnings.append(
            f"input file {parts[after]['source']!r} begins inside the hour that civil time "
            f"repeats ([input] time_zone = {setting_text(time_zone)}), whose first pass "
            f"ends {parts[before]['source']!r}: its first {head} stamp(s) read as the "
            "second pass (standard time), the files read in time order as one record")
    return parts


def _place(combined: dict, position: int) -> str:
    """Where the combined row `position` came from: "line 8 of 'a.csv'" for a text file,
    "record 7 of 'a.parquet'" for a typed table (whose places count records from 1)."""
    source = combined["sources"][position]
    word = "record" if source in combined["record_sources"] else "line"
    return f"{word} {int(combined['lines'][position])} of {source!r}"


def _combine(parts: list) -> dict:
    """Join the files' rows in time order; merge identical rows, refuse conflicting ones."""
    names = list(parts[0]["values"])
    stamps = np.concatenate([part["stamps"].to_numpy() for part in parts])
    lines = np.concatenate([part["lines"] for part in parts])
    sources = np.array([part["source"] for part in parts for _ in range(len(part["stamps"]))],
                       dtype=object)
    values = {name: np.concatenate([part["values"][name] for part in parts]) for name in names}
    record_sources = {part["source"] for part in parts if part.get("place_word") == "record"}
    order = np.argsort(stamps, kind="stable")
    stamps, lines, sources = stamps[order], lines[order], sources[order]
    values = {name: column[order] for name, column in values.items()}
    merged = completed = placeholders = 0
    completed_first = placeholder_first = None
    if len(parts) > 1:
        table = pd.DataFrame(values)
        table.insert(0, "__stamp__", stamps)
        identical = table.duplicated(keep="first").to_numpy()
        merged = int(identical.sum())
        keep = ~identical
        stamps, lines, sources = stamps[keep], lines[keep], sources[keep]
        values = {name: column[keep] for name, column in values.items()}
        if pd.Index(stamps).duplicated().any():
            # a placeholder of no value, whatever its flag, at a stamp another file has
            # with values (round review96: flagged otherwise than the record, it was
            # refused as files that disagree, the message naming a change of time marks)
            empty, _ = _placeholder_rows(pd.DatetimeIndex(stamps), values,
                                         np.ones(len(stamps), dtype=bool))
            if empty.size:
                placeholder_first = (str(sources[empty[0]]), int(lines[empty[0]]))
                keep = np.ones(len(stamps), dtype=bool)
                keep[empty] = False
                placeholders = int(empty.size)
                merged += placeholders      # "rows dropped" adds up to the records read
                stamps, lines, sources = stamps[keep], lines[keep], sources[keep]
                values = {name: column[keep] for name, column in values.items()}
        (stamps, lines, sources, values, completed_rows, completed,
         completed_first) = _complete_overlap(stamps, lines, sources, values)
        merged += completed_rows
        repeated = pd.Index(stamps).duplicated(keep=False)
        if repeated.any():
            first = np.flatnonzero(repeated)[:2]
            a, b = int(first[0]), int(first[1])
            # a value in one row and none in the other completes, not contradicts: the
            # columns named are those both rows give with different values
            differing = [name for name in names
                         if not (np.isnan(values[name][a]) or np.isnan(values[name][b])
                                 or values[name][a] == values[name][b])]
            one_sided = [name for name in names
                         if np.isnan(values[name][a]) != np.isnan(values[name][b])]
            if not differing:      # a third row of the stamp holds the contradiction
                differing, one_sided = one_sided, []
            differing = list(dict.fromkeys(name.split(":")[0] for name in differing))
            one_sided = list(dict.fromkeys(name.split(":")[0] for name in one_sided))
            fix = "remove one copy of the overlap from a file"
            if one_sided and differing and sources[a] != sources[b]:
                # files of two loggers joined by stamp that share a column (an air
                # temperature both log): one value per record cannot come from both
                fix = (f"the files complete each other in {', '.join(one_sided)}, so they "
                       "look like two loggers' files joined by stamp: keep the column(s) of "
                       f"{', '.join(differing)} in one of them only (in a copy), or rename "
                       "them in the other")
            where = {"lines": lines, "sources": sources, "record_sources": record_sources}
            if sources[a] != sources[b]:
                fix = (_other_step_overlap(parts, sources[a], sources[b])
                       or _shifted_overlap(parts, sources[a], sources[b])
                       or _boundary_shift(parts, pd.Timestamp(stamps[a]))
                       or _boundary_marks(parts, pd.Timestamp(stamps[a])) or fix)
                rounded = _rounding_only(stamps, sources, values, names)
                if rounded:
                    fix = (f"every such value of {rounded[0]!r} is that of {rounded[1]!r} "
                           "rounded to fewer decimals (a re-export with another number "
                           "format?): remove the overlap from one of them in a copy (keeping "
                           f"{rounded[1]!r}'s moves no value by more than that rounding)")
            raise DuplicateTimestampError(
                f"overlapping files disagree: stamp {pd.Timestamp(stamps[a])} is on "
                f"{_place(where, a)} and on {_place(where, b)} "
                f"with different values ({', '.join(differing)}); "
                f"{int(pd.Index(stamps).duplicated().sum())} such stamp(s) in all: {fix}")
    conversions: dict = {}
    for part in parts:
        for key, count in part["conversions"].items():
            conversions[key] = conversions.get(key, 0) + count
    return {
        "stamps": pd.DatetimeIndex(stamps), "lines": lines, "sources": sources,
        "record_sources": record_sources, "values": values, "merged_rows": merged,
        "completed_stamps": completed,
        "completed_first": completed_first,
        "placeholders": placeholders, "placeholder_first": placeholder_first,
        "records_read": sum(part["records_read"] for part in parts),
        "duplicate_rows": sum(part["duplicate_rows"] for part in parts),
        "header_trailing_delimiter": sum(part["header_trailing_delimiter"] for part in parts),
        "missing_cells": {name: sum(part["missing_cells"][name] for part in parts)
                          for name in names},
        "nonfinite_cells": {name: sum(part["nonfinite_cells"][name] for part in parts)
                            for name in names},
        "conversions": {key: count for key, count in conversions.items() if count},
    }


def _check_no_reader_names(columns: dict, time_columns: tuple, flag_columns: tuple,
                           file_columns: list, header: list, path: Path) -> None:
    """Refuse a setting naming a column by the name the parser makes for it, not one the
    header writes: "Unnamed: 0" for an empty header cell, "x.1" for the second "x"
    (layouts44: both were read, by a name a reader of the file cannot see in it)."""
    written = set(header)
    settings = ([("[input] time_column", c) for c in time_columns]
                + [(f"[input.columns] {k}", c) for k, c in columns.items()]
                + [("[input.columns] nee_flag", c) for c in flag_columns])
    for setting, column in settings:
        if column in written or column not in file_columns:
            continue
        place = file_columns.index(column) + 1
        if re.fullmatch(r"Unnamed: \d+", column):
            raise MissingColumnError(
                f"{setting} = {setting_text(column)}: no column of {str(path)!r} is named so; "
                f"column {place} has no name in the header (a table saved with its row "
                "index?): name it in the header of a copy of the file and set that name")
        copy = re.fullmatch(r"(.+)\.(\d+)", column)
        if copy and header.count(copy.group(1)) > int(copy.group(2)):
            raise MissingColumnError(
                f"{setting} = {setting_text(column)}: no column of {str(path)!r} is named so; "
                f"{copy.group(1)!r} is written {header.count(copy.group(1))} times in the "
                f"header and column {place} is its copy number {int(copy.group(2)) + 1}: "
                "rename the copies in the header of a copy of the file and set the new name")


def _resolve_columns(columns: dict, units: dict, file_columns: list, header: list,
                     time_columns: tuple, flag_columns: tuple, path: Path,
                     may_lack: bool = False) -> tuple[dict, tuple, tuple]:
    """Canonical name -> file column in canonical order, the flag columns, and the mapped
    columns the file lacks; check them.

    `may_lack`: a column of ``[input.columns]`` absent from the file is returned as
    ``(name, column)`` among the lacking instead of raising (one of several files; the
    caller decides with all files read). Mapping and flag columns include them.
    """
    taken = set(columns.values()) | set(time_columns) | set(flag_columns)
    # the names as the header writes them, for the messages: the parser names a repeated
    # header 'x' also 'x.1', a name not in the file, suggested before (layouts29)
    written = set(header)
    shown = [c for c in file_columns if c in written] if len(written) < len(header) \
        else file_columns
    _check_no_reader_names(columns, time_columns, flag_columns, file_columns, header, path)
    for time_column in time_columns:
        if time_column not in file_columns:
            raise MissingColumnError(f"[input] time_column = {setting_text(time_column)}: no such column in "
                                     f"{str(path)!r}{_near(time_column, shown, taken)}; "
                                     f"{_columns_listing(shown, header)}")
    lacking = []
    for column in flag_columns:
        if column not in file_columns:
            if may_lack:
                lacking.append(("nee_flag", column))
                continue
            raise MissingColumnError(f"[input.columns] nee_flag = {setting_text(column)}: no such column in "
                                     f"{str(path)!r}{_near(column, shown, taken)}; "
                                     f"{_columns_listing(shown, header)}")
    mapping = {}
    for name, column in columns.items():
        if column in time_columns:
            raise ConfigError(f"[input.columns] {name} = {setting_text(column)} is a time column")
        if column not in file_columns:
            if not may_lack:
                raise MissingColumnError(f"[input.columns] {name} = {setting_text(column)}: no such column "
                                         f"in {str(path)!r}{_near(column, shown, taken)}; "
                                         f"{_columns_listing(shown, header)}")
            lacking.append((name, column))
        mapping[name] = column
    used = set(mapping.values()) | set(time_columns) | set(flag_columns)
    for name in VARIABLES:
        if name == "nee_flag" and (flag_columns or name in used):
            continue
        if name not in mapping and name in file_columns and name not in used:
            mapping[name] = name
    if "nee_flag" in mapping:  # a column named nee_flag is read as the site flag
        flag_columns = (mapping.pop("nee_flag"),)
    needed = [name for name in REQUIRED if name != "vpd"]
    if "vpd" not in mapping and "rh" not in mapping:
        needed.append("vpd")
    for name in needed:
        if name == "rg" and "ppfd" in mapping:
            continue
        if name not in mapping:
            also = " (or map rh, from which vpd is derived with tair)" if name == "vpd" else ""
            also = " (or map ppfd, from which rg is derived)" if name == "rg" else also
            raise MissingColumnError(f"[input.columns] {name} is not mapped and {str(path)!r} "
                                     f"has no column {name!r}; add {name} = \"<column>\"{also}; "
                                     f"{_columns_listing(file_columns)}")
    for name in units:
        if name not in mapping:
            raise ConfigError(f"[input.units] {name} = {setting_text(units[name])} is given but no {name} "
                              "column is read; map it in [input.columns] or remove the unit")
    # pandas renames repeated headers 'x', 'x.1', ...; a mapped name must be unambiguous
    duplicated = {h for h in header if header.count(h) > 1}
    for name, column in list(mapping.items()) + [("time", c) for c in time_columns] + [
            ("nee_flag", c) for c in flag_columns]:
        if column in duplicated:
            raise InputFileError(f"column {column!r} (for {name}) appears more than once in the "
                                 f"header of {str(path)!r}; rename the copies")
    return ({name: mapping[name] for name in READER_VARIABLES if name in mapping}, flag_columns,
            tuple(lacking))


def _empty_required_message(name: str, mapping: dict, derived: list) -> str:
    """The error for a required variable without any value, naming the file columns it came from.

    The canonical name alone misleads where the variable is derived (Rg from a PPFD
    column, VPD from RH and air temperature): no column of that name is in the file.
    """
    if name == "vpd" and "vpd" in derived:
        source = (f"derived from rh ({mapping['rh']!r}) and tair ({mapping['tair']!r}), but no "
                  "record has both (each cell empty or a missing code)")
        fix = "[input.columns] rh and tair"
    else:
        key = "ppfd" if name == "rg" and "rg" in derived else name
        column = (f"the ppfd column {mapping[key]!r} it is converted from" if key == "ppfd"
                  else f"column {mapping[key]!r}")
        source = f"{column} has no value at all (every cell empty or a missing code)"
        fix = f"[input.columns] {key}"
    derive = ""
    if name == "vpd" and "vpd" not in derived and "rh" in mapping:
        # a VPD column the logger never filled beside a working RH probe
        derive = (f", or remove [input.columns] vpd to derive VPD from rh ({mapping['rh']!r}) "
                  f"and tair ({mapping['tair']!r})")
    return (f"{name} ({VARIABLES[name].description}): {source}; every stage needs measured "
            f"records of it: check {fix} and [input] missing{derive}")


def _describe_mapping(mapping: dict, flag_columns: tuple) -> str:
    pairs = list(mapping.items()) + [("nee_flag", column) for column in flag_columns]
    return ", ".join(f"{name} <- {column}" for name, column in pairs)


def _near(name: str, options: list, taken=()) -> str:
    """" (did you mean 'x'?)" for the column of `options` nearest `name`, or "".

    Columns in `taken` (read as another variable, or as the time) are never suggested.
    """
    free = [str(o) for o in options if o not in taken]
    key = name.strip().casefold()
    wrapped = [o for o in free if len(o) > 2 and o[0] == o[-1] == "'"]
    if f"'{name.strip()}'" in wrapped and len(wrapped) * 2 > len(free):
        # every name in single quotes: no CSV quotes, so each value is likely wrapped
        # too; "did you mean \"'stamp'\"?" led to a stamp refusal next (layouts35)
        return (f" (the file writes {name.strip()!r} as \"'{name.strip()}'\": its names, and "
                "likely its values, are wrapped in single quotes ('...'), which are no CSV "
                "quotes (those are double quotes, \"...\"): remove the single quotes in a "
                "copy of the file)")
    # the name with a prefix or suffix joined by "_", "-", ".", ":" or a blank (a site
    # code or logger name before each column name, "QMG_logger1_co2_flux" for "co2_flux";
    # layouts31: the file's columns were listed, none suggested)
    # also a unit after a slash or in parentheses glued to the name ("co2_net/umol m-2
    # s-1", "air_c(degC)"): no suffix was named, the file's columns listed (layouts48)
    joined = [o for o in free if len(key) >= 2 and (
        re.fullmatch(r".+[_\-.: ]" + re.escape(key), o.strip().casefold())
        or re.fullmatch(re.escape(key) + r"[_\-.: /(\[].+", o.strip().casefold()))]
    # the name itself with other blanks around it, or in another case ("CO2_FLUX" for
    # "co2_flux", which difflib scores as far apart) comes before any nearer-looking
    # name: a "co2_flux_open" beside it was suggested instead (layouts34)
    same = ([o for o in free if o.strip() == name.strip()]
            or [o for o in free if o.strip().casefold() == key])
    close = same[:1] or difflib.get_close_matches(name, free, n=1, cutoff=0.6)
    if close and not same:
        # columns as near as the nearest (t_soil_1, t_soil_2, t_soil_3 for "t_soil": soil
        # temperatures at several depths) are all named, in file order: the nearest alone
        # was the last in alphabetical order, a choice the file does not make
        def score(option):
            return difflib.SequenceMatcher(None, name, option).ratio()
        best = score(close[0])
        tied = [o for o in free if score(o) == best]
        if len(tied) > 1:
            return (" (did you mean one of " + ", ".join(repr(o) for o in tied[:6])
                    + "? as near as each other: map the one you mean)")
    if len(joined) > 1 and not same:
        # several columns carry the name with another prefix or suffix (a profile's
        # heights, tair_2m / tair_10m / tair_30m; two analysers, co2_flux_open /
        # co2_flux_closed): the nearest by difflib was the shortest, a choice the file
        # does not make and one that moves the budget (layouts34), so every one is named
        shown = joined[:6] + [c for c in close if c not in joined]
        return (" (did you mean one of " + ", ".join(repr(o) for o in shown)
                + f"? {len(joined)} columns carry the name with another prefix or suffix "
                "(heights, depths, instruments or statistics?): map the one you mean)")
    if not close:
        if len(joined) == 1:
            start = joined[0].strip().casefold().find(key)
            extra = joined[0].strip()[:start] if start > 0 else \
                joined[0].strip()[start + len(key):]
            where = "prefix" if start > 0 else "suffix"
            return (f" (did you mean {joined[0]!r}? the file's name carries the {where} "
                    f"{extra!r})")
    if not close:
        return ""
    if unicodedata.normalize("NFKC", close[0]) == unicodedata.normalize("NFKC", name):
        # shown alike by most fonts (a Greek mu typed for the file's micro sign)
        def codes(text, other):
            return ", ".join(f"U+{ord(c):04X} {unicodedata.name(c, '')}".rstrip()
                             for c in dict.fromkeys(text) if c not in other)
        escaped = "".join(c if c.isascii() and c.isprintable() else f"\\u{ord(c):04X}"
                          for c in close[0])
        return (f" (did you mean {close[0]!r}? they differ only in look-alike characters: "
                f"the setting has {codes(name, close[0])} where the file has "
                f"{codes(close[0], name)}; in TOML write \"{escaped}\")")
    control = sorted({c for c in close[0] if 0x80 <= ord(c) <= 0x9F} - set(name))
    if control:
        # bytes 0x80-0x9F are cp1252's punctuation (an en dash, quotes, the euro sign, a
        # bullet) and C1 control characters in latin-1: a cp1252 file read as latin-1
        return (f" (did you mean {close[0]!r}? it holds the control character(s) "
                + ", ".join(f"U+{ord(c):04X}" for c in control)
                + ", which a cp1252 file's punctuation (– ‘ ’ “ ” € •) becomes when read as "
                "latin-1: set [input] encoding = \"cp1252\")")
    return f" (did you mean {close[0]!r}?)"


#: Delimiters a one-cell header may reveal: character, its name, the TOML value that sets it
#: (a tab must be written "\t" in double quotes: in single quotes TOML keeps the backslash).
_DELIMITER_HINTS = ((";", "semicolons", '";"'), ("\t", "tabs", '"\\t"'), (",", "commas", '","'),
                    (" ", "spaces", '"whitespace"'), ("|", "vertical bars", '"|"'))


def _columns_listing(file_columns: list, header: list = ()) -> str:
    """The file's columns for a message; `header`, the names as written, adds which of
    them the header repeats."""
    if len(file_columns) == 1:
        for candidate, name, toml in _DELIMITER_HINTS:
            if candidate in str(file_columns[0]):
                return (f"the file's header is one cell holding {name}: set [input] "
                        f"delimiter = {toml}")
    # an empty header cell shown as such, not by the parser's "Unnamed: 0" (layouts44)
    written = set(header)
    shown = ["(no name)" if header and c not in written and re.fullmatch(r"Unnamed: \d+", str(c))
             else repr(c) for c in file_columns]
    listing = f"the file has columns: {', '.join(shown)}"
    repeated = [c for c in dict.fromkeys(header) if list(header).count(c) > 1]
    if repeated:
        listing += (f"; {', '.join(repr(c) for c in repeated)} "
                    f"{'is' if len(repeated) == 1 else 'are'} written more than once in the "
                    "header (two sensors of one name?): rename the copies in a copy of the file")
    unnamed = [n for n, c in enumerate(file_columns, 1) if str(c).startswith("Unnamed: ")]
    if unnamed:
        # the parser's name for an empty header cell, e.g. a table saved with its row index
        listing += (f"; column {unnamed[0]} has no name in the header (a table saved with "
                    "its row index?): name it in the header of a copy of the file")
    numbers = sum(bool(_NUMBER_NAME.fullmatch(str(c).strip())) for c in file_columns)
    if numbers * 2 > len(file_columns):
        # a file without a header line (names kept in another file, an array saved without
        # them): its first record was read as the names
        listing += (f"; {numbers} of these {len(file_columns)} names are numbers, so the line "
                    "read as the header is a record: fluxpart finds columns by their names in "
                    "a header line; add one in a copy of the file")
    return listing


# --------------------------------------------------------------------------- values


#: Dashes that stand where a minus sign belongs: hyphen, non-breaking hyphen, figure,
#: en and em dash, small and full-width hyphen-minus (Unicode General Punctuation and
#: compatibility blocks)
_DASH_SIGN = re.compile("[\u2010\u2011\u2012\u2013\u2014\ufe63\uff0d]\\d")


def _plain_numbers(text: pd.Series, decimal: str):
    """Values of a column whose cells are all empty or plain finite decimal numbers.

    The fast path of :func:`_numbers` (Arrow's string-to-double cast,
    :func:`fluxpart.plain_numbers.plain_floats`: about 15 times quicker than the general
    path and equal to it bit for bit on 700,000 formatted values: ``repr``, ``%.6g``,
    ``%.17g`` and ``%.3e``). Returns ``(values, empty)``, empty cells as NaN, or None
    where any cell is something else (a text code, padding, a decimal comma, ``nan`` or
    ``inf``) or the decimal mark is not ".", which the general path reads.
    """
    return plain_floats(text) if decimal == "." else None


#: A number in parentheses or with a trailing minus sign: accounting and business number
#: formats' negatives (spreadsheet number formats; COBOL-style reports, common practice).
_ACCOUNTING_NEGATIVE = re.compile(r"\(\s*\d[\d.,]*\s*\)|\d[\d.,]*-")


def _numbers(text: pd.Series, column: str, name: str, missing: tuple, decimal: str,
             source: str, lines: np.ndarray, comma_file: bool = False
             ) -> tuple[np.ndarray, int, np.ndarray]:
    """Parse a text column to float; return values, missing-code count, non-finite mask.

    `comma_file`: other columns of the file hold decimal commas (see
    :func:`_refuse_digit_grouping`).
    """
    plain = _plain_numbers(text, decimal)
    if plain is not None:
        # every cell is empty or a finite number: text missing codes can only match as
        # numbers (handled with the numeric codes below) and nothing is "not a number"
        numbers, is_code = plain
        return _apply_numeric_codes(numbers, is_code, missing, decimal)
    # a typographic minus sign (U+2212, word processors and some report exports) is a minus
    cleaned = text.str.strip().str.replace("\u2212", "-", regex=False)
    folded = cleaned.str.casefold()
    string_codes = {str(c).strip().casefold() for c in missing if isinstance(c, str)}
    is_code = folded.isin(string_codes).to_numpy() | (cleaned == "").to_numpy() \
        | folded.isin(_FLOAT_SPELLINGS_OF_NAN).to_numpy()
    _refuse_digit_grouping(cleaned, column, name, decimal, source, lines, comma_file)
    numeric_text = cleaned.str.replace(",", ".", regex=False) if decimal == "," else cleaned
    with np.errstate(over="ignore", invalid="ignore"):
        numbers = pd.to_numeric(numeric_text.where(~is_code, None), errors="coerce").to_numpy(
            dtype=float, na_value=np.nan)
    bad = np.isnan(numbers) & ~is_code
    if bad.any():
        # only the cells that are no number are tried as the old Windows spellings
        rows = np.flatnonzero(bad)
        odd = folded.iloc[rows]
        nan_like = odd.str.fullmatch(_MSVC_NAN).to_numpy(dtype=bool, na_value=False) \
            | odd.str.fullmatch(_C_NAN).to_numpy(dtype=bool, na_value=False)
        inf_like = odd.str.fullmatch(_MSVC_INFINITY).to_numpy(dtype=bool, na_value=False)
        if nan_like.any() or inf_like.any():
            is_code, numbers = is_code.copy(), numbers.copy()
            is_code[rows[nan_like]] = True
            negative = odd.str.startswith("-").to_numpy(dtype=bool, na_value=False)
            numbers[rows[inf_like]] = np.where(negative[inf_like], -np.inf, np.inf)
            bad = np.isnan(numbers) & ~is_code
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        cell = cleaned.iloc[first]
        if decimal == "." and "," in cell and pd.notna(
                pd.to_numeric(cell.replace(",", "."), errors="coerce")):
            # a cell holds the comma whole, so the delimiter already read the fields
            # (layouts42: "and the delimiter, e.g. ';'" was said of a tab file too)
            hint = "; it looks like a decimal comma: set [input] decimal = \",\""
            if _DIGIT_GROUPING["."].fullmatch(cell):
                hint += (", unless it is a thousands separator (1,034 for 1034): then write "
                         "the numbers without digit grouping in a copy of the file")
        elif _OTHER_GROUPING.fullmatch(cell):
            # listed as a missing code it would blank every value of 1000 or more
            hint = ("; it is a number with digit grouping (a thousands separator): write the "
                    "numbers without digit grouping in a copy of the file (a spreadsheet's "
                    "number format without the 1000 separator)")
        elif _DASH_SIGN.match(cell) and pd.notna(pd.to_numeric(
                "-" + cell[1:].replace(",", "." if decimal == "," else ","),
                errors="coerce")):
            # listed as a missing code it would blank every negative value; read as a minus
            # it would be a guess: a dash is punctuation, not a sign (Unicode: U+2212 MINUS
            # SIGN is the sign beside U+002D HYPHEN-MINUS, and is read as one)
            hint = (f"; it begins with the dash U+{ord(cell[0]):04X}, not a minus sign (a "
                    "word processor's autocorrect?): replace it with \"-\" in a copy of the "
                    "file")
        elif _ACCOUNTING_NEGATIVE.fullmatch(cell) and pd.notna(pd.to_numeric(
                cell.strip("()-").replace(",", "." if decimal == "," else ","),
                errors="coerce")):
            # listed as a missing code it would blank every negative value (one of them,
            # and the next refusal names the next); read as negative it would be a guess
            hint = ("; it is a negative number in an accounting or business format ("
                    "'(1.5)' or '1.5-' for -1.5, a spreadsheet's or report's number format): "
                    "write negative numbers with a leading minus sign in a copy of the file")
        elif cell.startswith("'") and pd.notna(pd.to_numeric(
                cell[1:].replace(",", "." if decimal == "," else ","), errors="coerce")):
            # a spreadsheet's mark for a number kept as text (layouts25: the hint was "add
            # it to [input] missing", which would have blanked that one value)
            hint = ("; it is a number with a leading apostrophe (a spreadsheet's mark for a "
                    "number kept as text): remove the apostrophes in a copy of the file")
        elif (unit := _cell_marks(cleaned[bad], decimal, _NUMBER_WITH_UNIT)):
            # listed as a missing code it would blank that one value (layouts29: the hint
            # was "add it to [input] missing"); read with the unit stripped it would trust
            # a unit the reader does not judge against [input.units]
            hint = (f"; it is a number followed by a unit in the cell ({unit}), which is "
                    "not read: remove the unit text from the cells in a copy of the file "
                    "(a spreadsheet's number format without the unit) and state the unit "
                    f"in [input.units] ({name.split(':')[0]} = \"...\")")
        elif (note := _cell_marks(cleaned[bad], decimal, _COMMENTED_NUMBER)):
            # listed as a missing code it would blank that one value (layouts31: the hint
            # was "add it to [input] missing"); read without it it would keep a value the
            # note may have meant dropped
            hint = (f"; it is a number followed by a comment ({note}), which is not read: "
                    "the commented values may be meant kept or dropped, two readings with "
                    "other budgets; in a copy of the file remove the comments (values kept) "
                    "or write those cells as a missing code (dropped)")
        elif (mark := _cell_marks(cleaned[bad], decimal, _MARKED_NUMBER)):
            # listed as a missing code it would blank one value of a mark whose meaning
            # (keep or drop) decides the budget; read without it it would keep them all
            hint = (f"; it is a number with a mark after it ({mark}: a logger's or an "
                    "editor's mark of a suspect, edited or estimated value?), which is not "
                    "read: the marked values may be meant kept or dropped, two readings "
                    "with other budgets; in a copy of the file remove the marks (values "
                    "kept) or write those cells as a missing code (dropped), and put the "
                    "mark in a flag column if it is a quality flag")
        elif (joint := _cell_marks(cleaned[bad], decimal, _TWO_NUMBERS)):
            hint = (f"; it holds two numbers joined by {joint} (a value and its quality "
                    "flag?), which are not read: split the column in two at that character "
                    "in a copy of the file and map the value (and the flag, e.g. nee_flag)")
        elif name.startswith("nee_flag"):
            # a missing flag rejects nothing, so "add it to missing" would keep bad records
            hint = ("; a record is kept where its flag is in [input] flag_accept: list the "
                    f"words that keep a record there (flag_accept = [{cell.strip()!r}] if "
                    f"{cell.strip()!r} means a good record; words or numbers, not both), or "
                    "recode the flags as numbers in a copy of the file (listing "
                    f"{cell!r} in [input] missing would keep those records)")
        else:
            hint = f"; if {cell!r} marks missing data, add it to [input] missing"
        raise InputFileError(f"column {column!r} ({name.split(':')[0]}): line "
                             f"{int(lines[first])} of {source!r} has {cell!r}, which is not a "
                             f"number; {int(bad.sum())} such cell(s){hint}")
    return _apply_numeric_codes(numbers, is_code, missing, decimal)


def _cell_marks(cells: pd.Series, decimal: str, pattern: re.Pattern) -> str:
    """The text after (or between) the numbers of `cells`, quoted, where every cell
    matches `pattern` (its first group a number, its second the text); else "".

    Where all carry the same text it is named once, else the first two are named.
    """
    if not cells.str.fullmatch(pattern.pattern).all():
        return ""
    parts = cells.str.extract(pattern.pattern)
    numbers = parts[0].str.replace(",", ".", regex=False) if decimal == "," else parts[0]
    if pd.to_numeric(numbers, errors="coerce").isna().any():
        return ""
    texts = pd.unique(parts[1].str.strip())
    if len(texts) == 1:
        return f"{texts[0]!r} in every such cell"
    more = f" and {len(texts) - 2} more" if len(texts) > 2 else ""
    return f"{texts[0]!r}, {texts[1]!r}{more}"


def _refuse_digit_grouping(cleaned: pd.Series, column: str, name: str, decimal: str,
                           source: str, lines: np.ndarray, comma_file: bool = False) -> None:
    """Raise where numbers are written with thousands separators (a spreadsheet's format).

    With ``decimal = ","`` a "1.034" read with the point dropped by the comma rule would be
    1.034, not 1034 (an Rg or PPFD above 1000 turned into a value near 1, silently); a
    "1.034,5" or "1,034.5" is not a number at all. A "1.034" counts as grouped in a
    column that uses decimal commas elsewhere, and in a column without them only where
    other columns of the file hold decimal commas (`comma_file`) and every cell of the
    column with a point is grouped in threes (a spreadsheet saves a PPFD or Rg column
    formatted as whole numbers with a thousands separator, "0", "12", "1.034", beside
    decimal-comma columns: read alone, 1034 became 1.034); a column with other points
    ("0.187", "12.5") is read with decimal points (a mixed export). A "1,034" with
    ``decimal = "."`` counts only in a column that uses decimal points elsewhere (the
    decimal-comma hint would have turned 1034 into 1.034). A file declared
    ``decimal = ","`` without a decimal comma in any column is read with decimal points.
    """
    grouping = "." if decimal == "," else ","
    candidates = cleaned.str.contains(grouping, regex=False).to_numpy(dtype=bool)
    if not candidates.any():
        return
    pattern = _DIGIT_GROUPING[decimal]
    cells = cleaned[candidates]
    grouped = cells.str.fullmatch(pattern).to_numpy(dtype=bool)
    if not cleaned.str.contains(decimal, regex=False).any() and not (
            comma_file and grouped.all()):
        # "1.034" (decimal comma) or "1,034" (decimal point) without the decimal mark in
        # the column: it may be a decimal mark of the other kind, named as such elsewhere
        grouped = grouped & cells.str.contains(decimal, regex=False).to_numpy(dtype=bool)
    if not grouped.any():
        return
    first = int(np.flatnonzero(candidates)[np.flatnonzero(grouped)[0]])
    cell = cleaned.iloc[first]
    raise InputFileError(
        f"column {column!r} ({name.split(':')[0]}): line {int(lines[first])} of {source!r} has "
        f"{cell!r}, a number with {grouping!r} as thousands separator beside the decimal "
        f"mark {decimal!r} ([input] decimal); {int(grouped.sum())} such cell(s). Write the "
        "numbers without digit grouping in a copy of the file (a spreadsheet's number format "
        "without the 1000 separator)")


def _storage_candidates(raw, values, missing, decimal, taken) -> dict:
    """The file's unread columns that read as the flux mapped as ``nee``, parsed whole.

    Only the columns whose sample of at most 1000 records (every 20th or closer) already
    reads as the mapped flux (:func:`fluxpart.storage_beside.same_flux`) are parsed whole,
    so a file of many columns costs a sample of each; a short file of a series is sampled
    closely enough to be judged. Empty where the file maps no Rg or PPFD.
    """
    from .storage_beside import same_flux

    if values.get("rg", values.get("ppfd")) is None:
        return {}
    nee = values["nee"]
    step = int(min(20, max(1, len(nee) // 1000)))
    codes = [code for code in _numeric_codes(missing, decimal) if math.isfinite(code)]

    def numbers(cells):
        text = cells.astype(str).str.strip()
        text = text.str.replace(",", ".", regex=False) if decimal == "," else text
        found = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float, na_value=np.nan,
                                                              copy=True)
        for code in codes:
            found[np.abs(found - code) <= 1e-6 * max(1.0, abs(code))] = np.nan
        return found

    others = {}
    for column in raw.columns:
        if column in taken or column in others:
            continue
        if not same_flux(nee[::step], numbers(raw[column].iloc[::step])):
            continue
        others[column] = numbers(raw[column])
    return others


def _storage_corrected_beside(parts: list, mapping: dict) -> str | None:
    """:func:`fluxpart.storage_beside.storage_corrected_beside` on the unread columns of
    every file and part joined in time order (a column a part lacks, or whose sample did
    not read as the flux there, is missing in that part's records)."""
    from .storage_beside import storage_corrected_beside

    names = list(dict.fromkeys(column for part in parts
                               for column in part.get("storage_candidates", {})))
    light_name = "rg" if "rg" in mapping else "ppfd"
    if not names or light_name not in mapping:
        return None
    # nanoseconds of each record (of UTC where the stamps carry a zone), in time order
    moments = np.concatenate([pd.DatetimeIndex(part["stamps"]).as_unit("ns").asi8
                              for part in parts])
    if moments.size < 200:
        return None
    order = np.argsort(moments, kind="stable")

    def joined(take):
        return np.concatenate([
            np.asarray(take(part), dtype=float) if take(part) is not None
            else np.full(len(part["stamps"]), np.nan) for part in parts])[order]

    nee = joined(lambda part: part["values"].get("nee"))
    light = joined(lambda part: part["values"].get(light_name))
    others = {column: joined(lambda part, column=column: part.get(
        "storage_candidates", {}).get(column)) for column in names}
    # the median step [min], whatever the stamps' resolution
    minutes = float(np.median(np.diff(moments[order]))) / 6e10
    return storage_corrected_beside(nee, light, others, minutes, mapping["nee"])


def _numeric_codes(missing: tuple, decimal: str) -> list:
    """The missing-value codes that are numbers, or text that reads as a number."""
    codes = [float(c) for c in missing if not isinstance(c, str)]
    for code in missing:
        if isinstance(code, str):
            # a code written with a typographic minus (U+2212) as the file spells it: the
            # cells are read with "-" for U+2212 (:func:`_numbers`), and so is the code
            code = code.replace("\u2212", "-")
            try:
                codes.append(float(code.replace(",", ".") if decimal == "," else code))
            except ValueError:
                pass
    return codes


def _apply_numeric_codes(numbers, is_code, missing, decimal):
    """Blank numeric missing codes and absurd magnitudes; return values, code count, absurd."""
    for code in _numeric_codes(missing, decimal):
        if not math.isfinite(code):      # NaN and infinities are missing anyway; an
            continue                     # infinite tolerance would blank every cell
        tolerance = 1e-6 * max(1.0, abs(code))
        with np.errstate(invalid="ignore", over="ignore"):
            is_code = is_code | (np.abs(numbers - code) <= tolerance)
    with np.errstate(invalid="ignore"):
        absurd = ~is_code & (np.isinf(numbers) | (np.abs(numbers) >= ABSURD_MAGNITUDE))
    numbers = np.where(is_code | absurd, np.nan, numbers)
    return numbers, int(is_code.sum()), absurd


def _combine_flags(flags: list, flag_accept: tuple) -> np.ndarray:
    """Canonical site flag: 0 where every present flag keeps the record, 1 where any rejects."""
    accept = np.asarray(flag_accept, dtype=float)
    stacked = np.vstack(flags)
    present = np.isfinite(stacked)
    rejects = present & ~np.isin(stacked, accept)
    out = np.where(rejects.any(axis=0), 1.0, 0.0)
    return np.where(present.any(axis=0), out, np.nan)


def _potential(starts: pd.DatetimeIndex, site, interval_minutes: int):
    """Potential radiation per record [W m-2], or None without a site."""
    if site is None:
        return None
    from .solar import potential_radiation

    return potential_radiation(starts, site.latitude, site.longitude, site.utc_offset,
                               interval_minutes=interval_minutes)


#: What each count of :func:`_conversion_text` says of its stamps, in the order named.
_CONVERSION_PHRASES = (
    ("hour_24", "hour-24 stamp(s) read as next midnight"),
    ("utc_offset", "stamp(s) with a UTC offset to local standard time"),
    ("rounded_to_minute", "stamp(s) within seconds of a whole minute rounded to it"),
    ("date_only", "stamp(s) written as the date alone read as midnight"),
    ("whole_numbers", "stamp(s) with whole numbers written with a decimal point (2021.0) "
                      "read without it"),
    ("decimal_fields", "stamp(s) with a decimal hour or day of the year read as the clock "
                       "it states"),
)


def _conversion_text(conversions: dict) -> str:
    parts = [f"{conversions[key]} {phrase}" for key, phrase in _CONVERSION_PHRASES
             if conversions.get(key)]
    if conversions.get("utc_zone"):
        parts.append(f"{conversions['utc_zone']} stamp(s) in {conversions.get('time_zone')} "
                     "moved to local standard time")
    if conversions.get("time_zone") and not conversions.get("utc_zone"):
        moved = conversions.get("daylight_saving", 0)
        # a zone without summer time in the record (UTC at a site of offset 0, or a
        # winter-only file) moves nothing: said so, not "0 stamp(s) moved back"
        parts.append(f"civil time of {conversions['time_zone']}: "
                     + (f"{moved} daylight-saving stamp(s) moved back one hour" if moved
                        else "no daylight-saving stamp, nothing moved"))
    return "; ".join(parts)


def _stamp(value) -> str:
    return "-" if value is None else pd.Timestamp(value).strftime("%Y-%m-%d %H:%M")
