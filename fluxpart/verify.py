"""The auditor's rerun: recompute a result folder from its manifest and compare.

:func:`verify` checks a result folder in four steps:

1. **Integrity.** The manifest's seal must match its content (an edited site,
   setting, caution or reader record breaks it), every table must have its
   recorded SHA-256, and the folder must hold nothing but the files its manifest
   lists (:func:`fluxpart.resultdir.check_folder`).
2. **The recorded inputs.** For a ``fluxpart run`` result, the input file and the
   site config are looked for where the manifest says, *relative to the result
   folder* (so a bundle that moved as a whole is found), or where ``--input`` and
   ``--config`` say. Each must have its recorded SHA-256. A site config that
   cannot be found is rebuilt from the text the manifest records. A
   ``fluxpart demo`` result is regenerated from its recorded seed.
3. **The rerun** with the recorded settings and seed (those of the site config's
   ``[processing]`` table when the manifest says the settings came from it, else
   the manifest's ``config``), written by the same writer to a scratch folder
   and read back. A setting added after the writing release
   (:data:`fluxpart.config.ADDED_SETTINGS`), which its recorded settings do not
   name, takes the value that behaves as that release did, and is said so.
4. **Comparison.** Every manifest field of the rerun (site, settings, seed,
   warnings, caution, reader record, screening thresholds, input hashes, table
   list) must equal the stored one; each that differs is named. Every table is
   compared value by value.

Verdicts and exit statuses of ``fluxpart verify``:

- ``bit-identical`` (0): every value equals its recomputation bit for bit;
- ``reproduced within floating-point rounding`` (0, or 1 with ``--exact``):
  floating-point values differ, but each by at most :data:`ROUNDING_TOLERANCE`
  relative to the larger of the two (values near zero: relative to
  :data:`NEAR_ZERO_SHARE` of the column's largest magnitude; a column that is the
  difference of others: relative to them; a fitted parameter: relative to its
  standard error where larger, and the standard error itself to
  :data:`STANDARD_ERROR_TOLERANCE`; the numbers of the manifest's ``provenance``
  alike), and nothing else differs; the largest relative difference and the
  platform facts that differ are given;
- ``NOT reproduced`` (1): anything else — a larger or non-float difference, a
  changed file, an edited manifest, an extra or missing file, another input;
- errors (2): no manifest, inputs that cannot be found.

Why the tolerance is 1e-6: a float64 carries about 16 significant digits. A
different CPU feature set or BLAS changes the order of additions (SIMD width,
threading), which moves sums of a year of records in their last 1–3 digits
(about 1e-15 to 1e-13 relative), and an iterative fit that stops at a relative
step of about 1e-8 can end a few steps apart. 1e-6 leaves a margin of 100 over
that, yet is five orders of magnitude below the 0.1 g C m-2 precision to which
an annual budget of some hundred g C m-2 is reported, so no difference that
could change a reported number passes as rounding. A discrete decision that
flips (a record screened, a u* class moved) gives a larger difference and is
reported as not reproduced.

Differences of library versions, of the product's code (its fingerprint,
:func:`fluxpart.fingerprint.code_fingerprint`) and of the platform are listed
and are not failures by themselves; when values differ and the code
fingerprint differs, the changed code is named as the likely cause.

Caution: identical numbers show that a result is reproducible from the recorded
input and settings. They do not certify the input data, the methods or a
carbon credit; that is for the applicable crediting methodology and accredited
verification.
"""

from __future__ import annotations

import codecs
import dataclasses
import gzip
import hashlib
import json
import os
import re
import shutil
import tempfile
import zlib
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

try:
    import bz2
except ImportError:   # a Python built without libbz2: bzip2 files are not unpacked
    bz2 = None
try:
    import lzma
except ImportError:   # a Python built without liblzma: xz files are not unpacked
    lzma = None

import numpy as np
import pandas as pd

from ._validate import printable_line
from .config import Config, absent_added_settings
from .errors import FluxpartError, InputFileError, OutputError
from .fingerprint import code_fingerprint, platform_differences, platform_record
from .io import broken_link
from .manifest import (
    CAUTION,
    QUOTED_TEXT,
    RUN_LOG,
    escaped_paths,
    library_versions,
    newer_format_reason,
    path_entries,
    portable_messages,
    read_manifest,
    recorded_path,
    shown_name,
    shown_path,
    without_paths,
)
from .reader_notes import MOVED_FIELDS, notes_moved
from .resultdir import interrupted_writes
from .schema import reworded
from .store import file_sha256, read_table, require_owner_access

__all__ = ["JSON_FORMAT", "NEAR_ZERO_SHARE", "ROUNDING_TOLERANCE", "Difference", "VerifyReport",
           "command_verify", "compare_tables", "field_differences", "respelled_inputs", "verify",
           "within_rounding"]

#: SHA-256 of no bytes (FIPS 180-4; ``hashlib.sha256(b"").hexdigest()``): an input or site
#: config with this digest is a file cut to nothing (a copy or sync cut short), which verify
#: says in words where the digest alone meant nothing to a reader (review75)
EMPTY_SHA256 = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
#: How a note says that the site config at its recorded place is another version than the
#: run's (its recorded copy was used): the note ``--quiet`` keeps (:attr:`VerifyReport.kept_notes`).
CONFIG_EDITED = "is another version"
#: Largest relative difference of a float value still classed as floating-point rounding.
ROUNDING_TOLERANCE = 1e-6
#: Standard errors of fitted parameters (a column ``X_se`` beside ``X`` in a
#: ``parameters_*`` table) are compared to
#: this relative tolerance, and each parameter ``X`` relative to the larger of itself and
#: its standard error. A standard error is taken from the curvature where the fit
#: stopped, and the fits stop once a step is below 0.01 standard errors
#: (:mod:`fluxpart.partition.daytime`): on another CPU a fit that rounding moved can stop a
#: step apart, and for a parameter the data barely determine (β0 = 15.5 ± 299 µmol m-2
#: s-1) its standard error moved by 1e-6 to 6e-6 (review round twelve). 1e-4 leaves a
#: margin of 15 over that, and stays two orders below the precision to which a standard
#: error is itself known, about 1/√(2(n − p)), 1–10 % for windows of 50–5000 records
#: (m). Budgets, fluxes and parameters keep :data:`ROUNDING_TOLERANCE`.
STANDARD_ERROR_TOLERANCE = 1e-4
#: Values smaller than this share of their column's largest magnitude are compared
#: relative to that share instead (relative differences of near-zero values mean nothing).
NEAR_ZERO_SHARE = 1e-3

#: Differing columns listed per table before the rest are summarised.
_MAX_COLUMNS_LISTED = 5
#: Differing manifest fields listed before the rest are summarised.
_MAX_FIELDS_LISTED = 40
_ENVIRONMENT_KEYS = ("versions", "code", "platform")
_PATH_FREE = ("format", "caution", "site", "config", "seed", "warnings")
#: Manifest fields that hold only file names (not content): a difference is a note.
#: Manifest fields that change with the input files' names alone. Each input file's
#: content is checked by its SHA-256 before the rerun, so a difference here is a renamed
#: copy (the joint SHA-256 of several files covers their names too).
_NAME_FIELDS = ("provenance.reader.files", "provenance.input.sha256")
#: Manifest fields that state what the writing release's benchmarks measured
#: (:data:`fluxpart.uncertainty.CALIBRATION_CHECK`, restated at each release): they
#: describe the release, not the result's numbers, so a difference is a note (review33:
#: restating it made every earlier result "NOT reproduced" on this field alone).
_RELEASE_FIELDS = ("provenance.uncertainty.checked",)
#: Tables that hold only error models, and the column names that state an uncertainty
#: (a sigma, a part of one, an interval's bound): where newer code changed only these,
#: the verdict says the central values are reproduced (review61: a 0.32.0 folder under
#: the code of gaplength50 listed 31 differences of σ, intervals and the gap-filling
#: error model and said only that the code differs). The u* scenarios' sums and their
#: spread (``*_ustar_p16`` … ``*_ustar_spread``, ``*_ustar_seasonal``, ``*_ustar_year``)
#: are the u* part's inputs, not the central run's values (review72: a 0.35.0 folder under
#: the code of speed56, whose scenarios' daytime fits start from the central run's, read
#: "computes these values otherwise" for its eight annual u* scenario columns, every
#: central value equal).
_UNCERTAINTY_TABLES = ("parameters_gapfill_error_model", "parameters_random_error_model",
                       "parameters_random_error_bins")
_UNCERTAINTY_COLUMN = re.compile(
    r".*(sigma|uncertainty|ci95).*|.+_ustar_(p\d+|spread|seasonal|year)")


@dataclass(frozen=True)
class Difference:
    """One way in which a stored result differs from its recomputation.

    Attributes
    ----------
    table : str
        Table name (``"annual"``, ...), ``"manifest"``, ``"folder"`` or ``"input"``.
    kind : str
        ``"value"`` (cells of a column differ beyond rounding), ``"rounding"``
        (float cells differ within :data:`ROUNDING_TOLERANCE`), ``"hash"`` (a
        file's SHA-256 is not the recorded one), ``"input"`` (the input or site
        config is another file), ``"file"`` (missing or unreadable), ``"extra"``
        (a file the manifest does not list), ``"seal"`` (the manifest was edited),
        ``"table"`` (a table only on one side), ``"columns"``, ``"rows"``,
        ``"index"``, ``"dtype"``, ``"more"`` (further differing columns, listed
        in `stored`), ``"manifest"`` (a manifest field differs; `column` names it)
        or ``"metadata"`` (a table's column type, unit or description, or a key of
        its table metadata, differs; `column` names it).
    column : str or None
        Column or manifest field at fault.
    row : str or None
        ``"<index name>=<value>"`` of the first (or, for rounding, the largest)
        differing row.
    stored, recomputed : str
        The two values as text (full precision for numbers).
    count : int
        How many cells (or rows) of the column differ.
    relative : float
        Largest relative difference of the column (``"value"`` and ``"rounding"``
        of float columns; NaN otherwise).
    cause : str
        Of an ``"input"``: why the file is another one. Of a ``"metadata"``: how the
        table's values compare (``""`` equal, ``"values within rounding"``, ``"values
        differ too"``).
    """

    table: str
    kind: str
    column: str | None = None
    row: str | None = None
    stored: str = ""
    recomputed: str = ""
    count: int = 1
    relative: float = float("nan")
    cause: str = ""

    def describe(self) -> str:
        """Return one line naming the location and both values."""
        if self.kind == "rounding" and self.table == "manifest":
            return (f"manifest field {self.column!r} within rounding: stored {self.stored}, "
                    f"recomputed {self.recomputed} (relative difference {self.relative:.3g})")
        if self.kind in ("value", "rounding"):
            more = f" ({self.count} rows differ" if self.count > 1 else " (1 row differs"
            relative = (f"; largest relative difference {self.relative:.3g})"
                        if np.isfinite(self.relative) else ")")
            within = " within rounding" if self.kind == "rounding" else ""
            return (f"{self.table}: column {self.column!r}{within} at {self.row}: stored "
                    f"{self.stored}, recomputed {self.recomputed}{more}{relative}")
        if self.kind == "more":
            return f"{self.table}: {self.count} more column(s) differ: {self.stored}"
        if self.kind == "input":
            now = (f"is now empty (0 bytes, SHA-256 {self.recomputed})"
                   if self.recomputed == EMPTY_SHA256 else f"has SHA-256 {self.recomputed}")
            cause = self.cause or f"it is not the {self.column} the result was computed from"
            return (f"{self.column} {self.row} {now}, but the manifest records "
                    f"{self.stored}: {cause}, so nothing was recomputed")
        if self.kind == "hash":
            return (f"{self.table}: file SHA-256 {self.recomputed} is not the {self.stored} "
                    f"recorded in manifest.json ({self.column or 'the file'} was changed after "
                    "it was written)")
        if self.kind in ("seal", "extra", "format"):
            return f"{self.table}: {self.column} {self.stored}"
        if self.kind == "file":
            return f"{self.table}: {self.stored} {self.recomputed}"
        if self.kind == "manifest":
            return (f"manifest field {self.column!r} differs: stored {self.stored}, "
                    f"recomputed {self.recomputed}")
        if self.kind == "table":
            return f"{self.table}: stored {self.stored}, recomputed {self.recomputed}"
        if self.kind == "metadata":
            return (f"{self.table}: metadata {self.column!r} differs "
                    f"({self.cause or 'values equal'}): stored {self.stored!r}, recomputed "
                    f"{self.recomputed!r}")
        where = f" column {self.column!r}" if self.column else ""
        at = f" at {self.row}" if self.row else ""
        return (f"{self.table}:{where}{at} {self.kind} differ: stored {self.stored}, "
                f"recomputed {self.recomputed}")


@dataclass(frozen=True)
class VerifyReport:
    """The outcome of :func:`verify`.

    Attributes
    ----------
    directory : pathlib.Path
        The result folder checked.
    source : str
        ``"run"`` (recorded input file), ``"demo"`` (regenerated demo record) or
        ``"none"`` (nothing recomputed: the folder fails its manifest and there is no
        input to rerun from).
    tables : tuple of str
        Tables compared.
    differences : tuple of Difference
        Failures: everything that is not reproduced (empty when reproduced).
    rounding : tuple of Difference
        Float columns that differ within :data:`ROUNDING_TOLERANCE`.
    environment : tuple of str
        Library versions, code fingerprint and platform facts that differ between
        the writing run and this one.
    code_changed : bool
        The product's code fingerprint differs from the recorded one.
    exact : bool
        Bit identity was demanded (``--exact``): rounding differences fail.
    notes : tuple of str
        Facts that are not failures (a site config rebuilt from the manifest, file
        bytes that differ with equal values).
    identity : str
        Which result the folder holds, from its manifest: seed, input and site config
        (name and SHA-256 prefix) and the release that wrote it (after an interrupted
        run the folder holds the earlier or the new result; this says which).
    replaced_manifest : str
        Where every table differs from the SHA-256 its manifest records: the evidence
        that the manifest and the tables come from different runs
        (:func:`replaced_manifest`); empty otherwise.
    recorded : dict
        The same facts as fields with the whole SHA-256 of each file
        (:func:`recorded_facts`), for ``--json``.
    """

    directory: Path
    source: str
    tables: tuple = ()
    differences: tuple = ()
    rounding: tuple = ()
    environment: tuple = ()
    code_changed: bool = False
    exact: bool = False
    notes: tuple = field(default=())
    identity: str = ""
    replaced_manifest: str = ""
    recorded: dict = field(default_factory=dict)

    @property
    def identical(self) -> bool:
        """True when every value equals its recomputation bit for bit."""
        return not self.differences and not self.rounding

    @property
    def reproduced(self) -> bool:
        """True when the verdict is bit-identical, or rounding only without ``exact``."""
        return not self.differences and (not self.rounding or not self.exact)

    @property
    def descriptions_only(self) -> bool:
        """True when every failure is a column's description worded otherwise (values
        equal; no unit, site or other metadata) and nothing else differs beyond rounding."""
        return bool(self.differences) and not self.replaced_manifest and all(
            d.kind == "metadata" and _metadata_item(d.column)[0] == "descriptions"
            for d in self.differences)

    @property
    def uncertainty_only(self) -> bool:
        """True when values differ and every one that does states an uncertainty.

        An uncertainty: a column of an error-model table (``_UNCERTAINTY_TABLES``) or
        one named for a sigma, an uncertainty, a 95 % bound or a u* scenario's sum
        (``_UNCERTAINTY_COLUMN``),
        and the manifest's list of an error-model table's columns; reworded
        descriptions beside them change no number. Anything else (a central value, a
        unit, rows, a file) makes it False.
        """
        def uncertain(table, column) -> bool:
            return table in _UNCERTAINTY_TABLES or bool(
                _UNCERTAINTY_COLUMN.fullmatch(str(column)))

        values = False
        for d in list(self.differences) + list(self.rounding):
            if d.kind in ("value", "rounding") and d.table != "manifest":
                values = True
                if not uncertain(d.table, d.column):
                    return False
            elif d.kind == "more" and d.table != "manifest":
                if not all(uncertain(d.table, name) for name in d.stored.split(", ")):
                    return False
            elif d.kind == "columns":
                if d.table not in _UNCERTAINTY_TABLES:
                    return False
            elif d.kind == "manifest":
                if not any(str(d.column) == f"tables.{name}.columns"
                           for name in _UNCERTAINTY_TABLES):
                    return False
            elif not (d.kind == "metadata" and _metadata_item(d.column)[0] == "descriptions"):
                return False
        return values and not self.replaced_manifest

    @property
    def version_warnings(self) -> tuple:
        """The environment differences (kept under their earlier name)."""
        return self.environment

    @property
    def largest_relative_difference(self) -> float:
        """Largest relative difference among the rounding differences (0 when none)."""
        values = [d.relative for d in self.rounding if np.isfinite(d.relative)]
        return max(values) if values else 0.0

    @property
    def changed_files(self) -> list[str]:
        """Files of the folder whose bytes differ from the recorded SHA-256."""
        return [d.column for d in self.differences if d.kind == "hash" and d.column]

    @property
    def folder_changes(self) -> list[str]:
        """One phrase per file that makes the folder differ from its manifest: changed,
        missing, damaged, not listed (a stale table, an added note) or the manifest
        edited (named even in the one-line verdict of ``--quiet``)."""
        phrases = [f"manifest.json likely another run's: {self.replaced_manifest}"
                   ] if self.replaced_manifest else []
        for d in self.differences:
            if d.kind == "hash" and d.column:
                if not self.replaced_manifest:
                    phrases.append(f"{d.column} changed after it was written")
            elif d.kind in ("extra", "seal", "format") and d.column:
                phrases.append(f"{d.column} {d.stored}")
            elif d.kind == "file" and d.stored and d.table != "input":
                phrases.append(f"{d.stored} {d.recomputed}".strip())
        return phrases

    @property
    def input_changes(self) -> list[str]:
        """One phrase per input file or site config that is not the one the result was
        computed from (its SHA-256 differs, so nothing was recomputed): named in the
        one-line verdict of ``--quiet`` and of a network's site, which otherwise read
        "1 difference(s)" naming nothing (auditor53)."""
        return [" ".join([str(d.column), *([Path(d.row).name] if d.row else [])])
                + (f" is now empty (0 bytes; recorded SHA-256 {d.stored[:12]}...)"
                   if d.recomputed == EMPTY_SHA256 else
                   f" is not the one the result was computed from (SHA-256 "
                   f"{d.recomputed[:12]}..., recorded {d.stored[:12]}...)")
                for d in self.differences if d.kind == "input"]

    @property
    def kept_notes(self) -> list[str]:
        """The notes the one-line verdicts keep (``--quiet``, a network's site): the site
        config at its recorded place edited since the run, whose recorded copy the verdict
        used. Without it a reader of that file took its settings for the verified ones
        (review75)."""
        return [note for note in self.notes
                if note.startswith("site config: ") and CONFIG_EDITED in note]

    @property
    def changes(self) -> list[str]:
        """:attr:`folder_changes` and :attr:`input_changes`: what the one-line verdicts
        name."""
        return self.folder_changes + self.input_changes

    @property
    def exit_code(self) -> int:
        """0 when reproduced (see :attr:`reproduced`), 1 otherwise."""
        return 0 if self.reproduced else 1

    @property
    def shown_environment(self) -> tuple:
        """:attr:`environment` as printed: a library version's "numbers may differ"
        said as what happened where every table was recomputed bit-identical."""
        if not (self.identical and self.source != "none"):
            return self.environment
        return tuple(e.replace(_MAY_DIFFER, _DID_NOT_DIFFER) for e in self.environment)

    def _platform_phrase(self) -> str:
        platform = [e for e in self.environment if e.startswith("platform differs")]
        return platform[0][len("platform differs in "):] if platform else ""

    def format(self, detail: bool = False) -> str:
        """Return the report as text for the command line.

        `detail`: print each differing metadata entry with both texts in full
        (``verify --detail``); by default a table whose values are equal and whose
        metadata differ is one line naming what differs and its columns
        (:func:`metadata_summary`).
        """
        count = len(self.tables)
        folder = shown_path(self.directory)
        if self.identical:
            lines = [f"bit-identical: all {count} tables of {folder} equal, bit for "
                     f"bit, their recomputation from the recorded {self.source} input and "
                     "settings"]
        elif self.reproduced:
            where = self._platform_phrase()
            cause = (f"platform differs in {where}" if where else
                     "the code differs" if self.code_changed else
                     "no recorded platform fact differs")
            lines = [f"reproduced within floating-point rounding (largest relative difference "
                     f"{self.largest_relative_difference:.3g}; {cause}): all {count} tables "
                     f"of {folder} match their recomputation within the relative "
                     f"tolerance {ROUNDING_TOLERANCE:g} (standard errors of fitted "
                     f"parameters {STANDARD_ERROR_TOLERANCE:g})"]
            lines += [f"  {d.describe()}" for d in self.rounding]
        else:
            failures = list(self.differences)
            if self.exact and not failures:
                lines = [f"NOT bit-identical (--exact): {len(self.rounding)} column(s) of "
                         f"{folder} differ within floating-point rounding (largest "
                         f"relative difference {self.largest_relative_difference:.3g})"]
            elif self.source == "none":
                lines = [f"NOT reproduced: {len(failures)} difference(s) between "
                         f"{folder} and its manifest (nothing recomputed):"]
            else:
                wording = (", all of them in the tables' column descriptions; every value "
                           "equals its recomputation" + (" within rounding" if self.rounding
                                                         else "")
                           if self.descriptions_only else "")
                # one count with and without --detail: 15 reworded descriptions of a
                # 0.31.0 folder read "15" plain and "45" with --detail (review57)
                shown = _difference_count(failures)
                entries = (f" ({len(failures)} entries below: a column's unit or description "
                           "is stored in three places of its file)"
                           if detail and len(failures) != shown else "")
                lines = [f"NOT reproduced: {shown} difference(s) between "
                         f"{folder} and its recomputation{wording}{entries}:"]
            lines += [f"  {line}" for line in _described(failures + list(self.rounding),
                                                         detail)]
            # a file changed after it was written is no effect of code: naming the code
            # alone as the likely cause beside it read as an all-clear (review43)
            edited = sorted({d.table for d in failures if d.kind in ("hash", "seal")})
            if self.replaced_manifest:
                lines.append("likely cause: manifest.json of another run copied into the "
                             "folder (or its tables and run log replaced by another run's): "
                             f"{self.replaced_manifest}")
            elif self.code_changed and any(d.kind in ("value", "rows", "columns", "table",
                                                    "rounding", "manifest", "metadata")
                                         for d in failures + list(self.rounding)):
                # "metadata": a column's description reworded by the newer code (0.30.0's
                # ustar_threshold) left an auditor a NOT reproduced without any cause
                lines.append("likely cause: " + (
                    f"{', '.join(edited)} changed after it was written (its SHA-256 or the "
                    "manifest's seal is not the recorded one), which no code change "
                    "explains; the product's code differs too (code fingerprint changed; "
                    "see below)" if edited else
                    "the product's code differs from the code that wrote the result (code "
                    "fingerprint changed; see below)"))
            values_differ = any(d.kind in ("value", "rounding", "more", "rows", "columns",
                                           "table") and d.table != "manifest"
                                for d in failures + list(self.rounding))
            if self.code_changed and values_differ and not edited \
                    and not self.replaced_manifest and self.source != "none":
                # a 0.32.0 folder under newer code: 31 differing σ, intervals and model
                # parameters, and no word of what they mean or what to do (review61)
                lines.append(
                    "what this means: " + (
                        "every central value (budgets, fluxes, fits) is reproduced; the "
                        "values that differ are uncertainties (sigmas, intervals, error "
                        "models, the u* scenarios' sums), which the running release states "
                        "otherwise"
                        if self.uncertainty_only else
                        "the running release computes these values otherwise")
                    + " (its changelog says what changed and why). To reproduce the "
                    "result, verify with the release that wrote it (result: below); to "
                    "take this release's numbers, run the input again into a new folder "
                    "and keep this one as it is")
            if self.descriptions_only:
                # 0.31.0's folders under 0.32.0: 45 long lines of reworded descriptions and
                # no word of what they mean for the numbers or what to do (review56)
                lines.append(
                    "what this means: the numbers are reproduced; only the words describing "
                    "columns differ (no unit, site or setting), as "
                    + ("the running release words them (see its changelog)"
                       if self.code_changed else "written in the folder's files")
                    + ". To reproduce the descriptions too, verify with the release that "
                    "wrote the result (result: below)")
        if self.identity:
            lines.append(f"result: {self.identity}")
        lines += [f"environment: {e}" for e in self.shown_environment]
        lines += [f"note: {n}" for n in self.notes]
        lines.append(f"Caution: {VERIFY_CAUTION}")
        return "\n".join(lines)

    @property
    def verdict(self) -> str:
        """The verdict in a few words: ``"bit-identical"``, ``"reproduced within
        rounding"``, ``"not bit-identical"`` (``--exact``, rounding only) or ``"not
        reproduced"``."""
        if self.identical:
            return "bit-identical"
        if self.reproduced:
            return "reproduced within rounding"
        return "not bit-identical" if self.exact and not self.differences else "not reproduced"

    def as_json(self) -> str:
        """Return the report as one JSON object (``fluxpart verify --json``), for an
        auditor's script.

        Keys: ``format`` (:data:`JSON_FORMAT`), ``verdict`` (:attr:`verdict`),
        ``exit_code``, ``reproduced``, ``recomputed`` (false where nothing was rerun:
        the folder fails its own manifest and no input was at hand), ``directory``,
        ``result`` (which result the folder holds), ``tables``, ``differences`` and
        ``rounding`` (each a :class:`Difference`'s fields; ``relative`` null where not a
        number), ``largest_relative_difference``, ``folder_changes``, ``environment``,
        ``code_changed``, ``notes``, ``caution``, ``text`` (the lines the command
        prints without ``--json``) and ``recorded`` (:func:`recorded_facts`: seed, each
        input file's and the site config's path and whole SHA-256, the release and code
        fingerprint that wrote the result, as its manifest records them; review64: the
        ``result`` line gives 12 characters of a hash, which an auditor's script cannot
        match against the SHA-256 of the file it holds). Strict JSON (RFC 8259: no NaN), keys sorted, every
        character beyond ASCII escaped (``\\u2013``): readable under any locale's
        output encoding (a latin-1 or C locale's stream could not take the en dash of
        "Lloyd–Taylor"); the same report gives the same bytes.
        """
        def entry(d: Difference) -> dict:
            fields = dataclasses.asdict(d)
            fields["count"] = int(d.count)
            fields["relative"] = float(d.relative) if np.isfinite(d.relative) else None
            return fields
        largest = self.largest_relative_difference
        return json.dumps({
            "format": JSON_FORMAT, "verdict": self.verdict, "exit_code": self.exit_code,
            "reproduced": self.reproduced, "recomputed": self.source != "none",
            "directory": str(self.directory), "result": self.identity,
            "tables": list(self.tables),
            "differences": [entry(d) for d in self.differences],
            "rounding": [entry(d) for d in self.rounding],
            "largest_relative_difference": float(largest),
            "folder_changes": self.folder_changes,
            "environment": list(self.shown_environment),
            "code_changed": bool(self.code_changed), "notes": list(self.notes),
            "caution": VERIFY_CAUTION, "text": self.format().splitlines(),
            "recorded": self.recorded,
        }, indent=2, sort_keys=True, ensure_ascii=True, allow_nan=False)


#: The layout of ``verify --json``'s object (:meth:`VerifyReport.as_json`); a changed
#: meaning of a key gets a new name here.
JSON_FORMAT = "fluxpart-verify/1"
#: What every verdict is followed by: reproduction is not certification.
VERIFY_CAUTION = ("reproduced numbers show the result follows from the recorded input and "
                  "settings; they do not certify the data or a credit. " + CAUTION)


#: Where a metadata key of :func:`metadata_differences` names a column: a field's own
#: ``"<column> <what>"``, the fluxpart JSON's ``fluxpart.columns.<column>.<what>`` and the
#: pandas copy's ``PANDAS_ATTRS.<what>s.<column>``.
_METADATA_KEYS = (re.compile(r"PANDAS_ATTRS\.(?P<what>units|descriptions)\.(?P<column>.+)"),
                  re.compile(r"fluxpart\.columns\.(?P<column>.+)\.(?P<what>\w+)"),
                  re.compile(r"(?P<column>[^ ]+) (?P<what>type|unit|description)"))
#: Column names a metadata line lists before the rest are counted.
_METADATA_COLUMNS_LISTED = 8
#: Longest metadata text a metadata line shows beside its column [characters]: a unit or
#: an offset, not a description.
_METADATA_TEXT_SHOWN = 40


def _metadata_item(key: str) -> tuple[str, str | None]:
    """(what differs in the plural, column or None) of a metadata key: the three copies of
    one column's description are one item (``"descriptions"``, the column)."""
    for pattern in _METADATA_KEYS:
        match = pattern.fullmatch(str(key))
        if match:
            return match["what"].removesuffix("s") + "s", match["column"]
    return str(key), None


def metadata_summary(differences) -> list[str]:
    """One line per table whose metadata differ, naming what and its columns.

    Each column's description or unit is written three times (the Parquet field, the
    fluxpart table metadata and the pandas copy, :mod:`fluxpart.store`): listing each
    copy in full printed 18 lines of about 1400 characters for two reworded
    descriptions (review55), where ``diff`` says it in one line per table.

    Parameters
    ----------
    differences : iterable of Difference
        The ``"metadata"`` entries (others are ignored).

    Returns
    -------
    list of str
        ``"<table>: metadata only (values equal): descriptions of a, b; units of c
        (stored 'kg m-2', recomputed 'g m-2')"``: a table-level key
        (``fluxpart.site.utc_offset``) named as itself, both texts where each is at most
        :data:`_METADATA_TEXT_SHOWN` characters, at most
        :data:`_METADATA_COLUMNS_LISTED` columns per item, then a count. Where the
        table's values differ too (the entries' `cause`), ``"<table>: metadata (values
        differ too, listed apart): ..."``.
    """
    tables: dict = {}
    values: dict = {}
    for difference in differences:
        if difference.kind != "metadata":
            continue
        what, column = _metadata_item(difference.column)
        columns = tables.setdefault(difference.table, {}).setdefault(what, {})
        # short texts (a unit, an offset) are shown: an edited "kg m-2" is the finding
        texts = (difference.stored, difference.recomputed)
        short = all(len(str(t)) <= _METADATA_TEXT_SHOWN for t in texts)
        columns.setdefault(column, f" (stored {texts[0]!r}, recomputed {texts[1]!r})"
                           if short else "")
        values.setdefault(difference.table, difference.cause)
    lines = []
    for table, items in tables.items():
        parts = []
        for what, columns in items.items():
            if None in columns:
                parts.append(f"{what}{columns[None]}")
                continue
            more = len(columns) - _METADATA_COLUMNS_LISTED
            named = ", ".join(f"{column}{shown}" for column, shown in
                              list(columns.items())[:_METADATA_COLUMNS_LISTED])
            parts.append(f"{what} of {named}" + (f" and {more} more" if more > 0 else ""))
        state = (f"metadata ({values[table]}, listed apart)" if values[table] else
                 "metadata only (values equal)")
        lines.append(f"{table}: {state}: {'; '.join(parts)} (the texts: verify --detail)")
    return lines


def _described(differences: list, detail: bool) -> list[str]:
    """The lines of `differences`: each described, or with `detail` False the metadata
    entries of a table as one line (:func:`metadata_summary`) where its first one was."""
    if detail:
        return [d.describe() for d in differences]
    lines, done = [], set()
    for difference in differences:
        if difference.kind != "metadata":
            lines.append(difference.describe())
        elif difference.table not in done:
            done.add(difference.table)
            lines += metadata_summary(d for d in differences if d.kind == "metadata"
                                      and d.table == difference.table)
    return lines


def _difference_count(differences: list) -> int:
    """Differences as listed without detail: one per column's metadata item, not per copy."""
    items = {(d.table, *_metadata_item(d.column)) for d in differences if d.kind == "metadata"}
    return len(items) + sum(d.kind != "metadata" for d in differences)


# --------------------------------------------------------------------------- value comparison

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


#: Columns that are differences of other columns of the same row, with the columns they
#: are computed from (agreement.method_agreement, pipeline's u* scenario spread): the
#: rounding of a difference is the rounding of its operands, so it is compared relative
#: to their magnitude, not its own (cancellation, Higham 2002 §1.7 (m)). Without this a
#: method difference of 0.001 g C m-2 from two daily sums of 1 g C m-2 read a relative
#: rounding of 1e-8 in each sum as 2.6e-5 in the difference: NOT reproduced on a CPU
#: with AVX-512 switched off (review round twelve).
_DIFFERENCE_OPERANDS = (
    (re.compile(r"(gpp|reco)_method_difference"), ("{0}_daytime", "{0}_nighttime"), False),
    (re.compile(r"(gpp|reco)_relative_difference"), ("{0}_daytime", "{0}_nighttime"), True),
    (re.compile(r"(.+)_ustar_spread"), ("{0}_ustar_p16", "{0}_ustar_p50", "{0}_ustar_p84"),
     False),
)


def _operand_scale(column, stored: pd.DataFrame, recomputed: pd.DataFrame):
    """Per-row magnitude of the operands a difference column is computed from (the larger
    of the stored and recomputed values; for a relative difference divided by the mean of
    the two it is relative to); None for a column that is no difference of others."""
    found = [(pattern.fullmatch(str(column)), templates, relative)
             for pattern, templates, relative in _DIFFERENCE_OPERANDS]
    found = [(match, templates, relative) for match, templates, relative in found if match]
    if not found:
        return None
    match, templates, relative = found[0]
    operands = [t.format(match[1]) for t in templates]
    if not all(c in stored.columns and c in recomputed.columns for c in operands):
        return None
    values = [frame[c].to_numpy(dtype=np.float64) for frame in (stored, recomputed)
              for c in operands]
    with np.errstate(invalid="ignore", divide="ignore"):
        scale = np.fmax.reduce(np.abs(np.vstack(values)), axis=0)
        if relative:
            # (day - night) / |mean(day, night)|, the mean of the stored values
            mean = np.abs(0.5 * (values[0] + values[1]))
            scale = np.where(mean > 0, scale / mean, np.nan)
    return np.where(np.isfinite(scale), scale, 0.0)


def _float_column(left: pd.Series, right: pd.Series, operand_scale=None,
                  tolerance: float = ROUNDING_TOLERANCE):
    """(differs bitwise, beyond rounding, relative difference) of two float64 columns.

    `operand_scale` (per row, optional): the magnitude of the operands of a difference
    column (or a parameter's standard error), the reference of its relative difference
    where larger than the values. `tolerance`: the largest relative difference that is
    rounding.
    """
    a = left.to_numpy(dtype=np.float64, copy=True)
    b = right.to_numpy(dtype=np.float64, copy=True)
    nan_a, nan_b = np.isnan(a), np.isnan(b)
    differs = (a.view(np.int64) != b.view(np.int64)) & ~(nan_a & nan_b)
    relative = np.zeros(len(a))
    beyond = differs & (nan_a != nan_b)
    both = differs & ~nan_a & ~nan_b
    if both.any():
        with np.errstate(invalid="ignore", over="ignore"):
            finite = np.isfinite(a) & np.isfinite(b)
            scale = np.nanmax(np.abs(np.concatenate([a[np.isfinite(a)], b[np.isfinite(b)]]))
                              ) if (np.isfinite(a) | np.isfinite(b)).any() else 0.0
            reference = np.maximum(np.maximum(np.abs(a), np.abs(b)), NEAR_ZERO_SHARE * scale)
            if operand_scale is not None:
                reference = np.maximum(reference, operand_scale)
            gap = np.abs(a - b)
            relative = np.where(both & finite & (reference > 0), gap / np.where(
                reference > 0, reference, 1.0), np.where(both, np.inf, 0.0))
        beyond |= both & ~(relative <= tolerance)
    return differs, beyond, relative


def _standard_error_scale(column, stored: pd.DataFrame, recomputed: pd.DataFrame):
    """Per-row standard error of a fitted parameter whose table holds ``<column>_se`` (the
    larger of the stored and recomputed), None for any other column."""
    name = f"{column}_se"
    if name not in stored.columns or name not in recomputed.columns:
        return None
    values = np.vstack([frame[name].to_numpy(dtype=np.float64) for frame in (stored, recomputed)])
    with np.errstate(invalid="ignore"):
        scale = np.fmax.reduce(np.abs(values), axis=0)
    return np.where(np.isfinite(scale), scale, 0.0)


def _is_standard_error(column, stored: pd.DataFrame) -> bool:
    """Whether `column` is ``X_se`` beside a parameter ``X`` of the same table."""
    return str(column).endswith("_se") and str(column)[:-3] in stored.columns


def _is_float(series: pd.Series) -> bool:
    return pd.api.types.is_float_dtype(series.dtype)


def within_rounding(column, first: pd.DataFrame, second: pd.DataFrame,
                    row_scale=None) -> np.ndarray:
    """Rows where a float column of two tables of equal index differs, but only within
    :data:`ROUNDING_TOLERANCE`, judged as :func:`compare_tables` judges it (relative to
    the larger value, a near-zero value to :data:`NEAR_ZERO_SHARE` of the column, a
    difference column to its operands).

    Parameters
    ----------
    column : str
        A column both tables hold.
    first, second : pandas.DataFrame
        Two tables of the same index (rows in the same order).
    row_scale : numpy.ndarray, optional
        Per row, the magnitude of the values the column's value is computed beside (in
        its unit): a near-zero value is then judged relative to :data:`NEAR_ZERO_SHARE`
        of it as well as of the column (a table of one row has no column scale to speak
        of; ``diff``'s annual values, round faults46).

    Returns
    -------
    numpy.ndarray of bool
        Per row: the values are not bit for bit equal but equal within rounding. All
        False where the column is no float column in both.

    References
    ----------
    Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed.,
    SIAM, §1.7 (cancellation: a difference's rounding is its operands') (m).
    """
    left, right = first[column], second[column]
    if not (_is_float(left) and _is_float(right)):
        return np.zeros(len(left), dtype=bool)
    scale = _operand_scale(column, first, second)
    if row_scale is not None:
        floor = NEAR_ZERO_SHARE * np.nan_to_num(np.asarray(row_scale, dtype=np.float64))
        scale = floor if scale is None else np.maximum(scale, floor)
    differs, beyond, _ = _float_column(left, right, scale)
    return differs & ~beyond


def compare_tables(name: str, stored: pd.DataFrame, recomputed: pd.DataFrame) -> list:
    """Compare two versions of a table value by value.

    Returns
    -------
    list of Difference
        ``"rounding"`` entries for float columns that differ only within
        :data:`ROUNDING_TOLERANCE`; ``"value"`` and structural entries for
        everything else.
    """
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
    listed, unlisted = 0, []
    for column in [c for c in stored.columns if c in recomputed.columns]:
        left, right = stored[column], recomputed[column]
        if _is_float(left) and _is_float(right):
            fitted = str(name).startswith("parameters")     # tables of fitted parameters
            scale = _operand_scale(column, stored, recomputed)
            if scale is None and fitted:
                scale = _standard_error_scale(column, stored, recomputed)
            differs, beyond, relative = _float_column(
                left, right, scale, STANDARD_ERROR_TOLERANCE
                if fitted and _is_standard_error(column, stored) else ROUNDING_TOLERANCE)
            kind = "value" if beyond.any() else "rounding"
            shown = beyond if beyond.any() else differs
            position = (int(np.flatnonzero(beyond)[0]) if beyond.any()
                        else int(np.argmax(np.where(differs, relative, -1.0)))
                        if differs.any() else 0)        # an empty table has no position
            largest = float(np.max(relative[differs])) if differs.any() else float("nan")
        else:
            differs = _unequal(left, right)
            kind, shown = "value", differs
            position = int(np.flatnonzero(differs)[0]) if differs.any() else 0
            largest = float("nan")
        if differs.any():
            if kind == "value" and listed >= _MAX_COLUMNS_LISTED:
                unlisted.append(str(column))
                continue
            out.append(Difference(name, kind, column=str(column),
                                  row=_row_label(stored.index, position),
                                  stored=_show(left.iloc[position]),
                                  recomputed=_show(right.iloc[position]),
                                  count=int(shown.sum()), relative=largest))
            listed += kind == "value"
        elif left.dtype != right.dtype:
            out.append(Difference(name, "dtype", column=str(column), stored=str(left.dtype),
                                  recomputed=str(right.dtype)))
    if unlisted:
        out.append(Difference(name, "more", stored=", ".join(unlisted), count=len(unlisted)))
    return out


# --------------------------------------------------------------------------- manifest fields

def field_differences(stored, recomputed, prefix: str) -> list[tuple[str, object, object]]:
    """Every leaf of two JSON values that differs, as ``(dotted name, stored, recomputed)``.

    Dictionaries are walked key by key (a key on one side only is a difference);
    lists and other values are compared whole.
    """
    if isinstance(stored, dict) and isinstance(recomputed, dict):
        out = []
        for key in sorted(set(stored) | set(recomputed), key=str):
            name = f"{prefix}.{key}" if prefix else str(key)
            if key not in stored:
                out.append((name, "(absent)", recomputed[key]))
            elif key not in recomputed:
                out.append((name, stored[key], "(absent)"))
            else:
                out += field_differences(stored[key], recomputed[key], name)
        return out
    return [] if stored == recomputed else [(prefix, stored, recomputed)]


def _text(value) -> str:
    if value == "(absent)":
        return value
    text = json.dumps(value, sort_keys=True, ensure_ascii=False)
    return text if len(text) <= 200 else text[:197] + "..."


def _texts(stored, recomputed) -> tuple[str, str]:
    """Both values as :func:`_text` shows them, each cut to begin shortly before the
    first character where they differ when a long common beginning would otherwise fill
    the 200 characters shown (a warning reworded in its second half showed as two equal
    prefixes)."""
    if "(absent)" in (stored, recomputed):
        return _text(stored), _text(recomputed)
    full = [json.dumps(v, sort_keys=True, ensure_ascii=False) for v in (stored, recomputed)]
    return cut_where_they_differ(full[0], full[1], width=200, context=40)


def cut_where_they_differ(first: str, second: str, *, width: int,
                          context: int) -> tuple[str, str]:
    """Two differing texts, each cut to `width` characters so that their difference shows.

    Where either is longer than `width` and their common beginning is longer than twice
    `context`, both begin `context` characters before their first differing character,
    marked ``"..."``; a text still too long ends in ``"..."``. Used by ``verify`` (200,
    40) and ``diff`` (120, 30; round review63: two runs' warnings alike in their first
    117 characters were shown there as two equal cut texts).

    Parameters
    ----------
    first, second : str
        The two texts.
    width : int
        Most characters shown of each [characters].
    context : int
        Characters kept before the first difference [characters].

    Returns
    -------
    tuple of str
    """
    if len(first) <= width and len(second) <= width:
        return first, second
    same = len(os.path.commonprefix([first, second]))
    start = same - context if same > 2 * context else 0
    shown = []
    for text in (first, second):
        text = ("..." if start else "") + text[start:]
        shown.append(text if len(text) <= width else text[:width - 3] + "...")
    return shown[0], shown[1]


def _float_relative(a, b) -> float:
    """Relative difference of two manifest numbers of which one at least is a float (the
    model-choice criteria and weights of ``provenance``); NaN for anything else. A sum of
    residuals summed in another order (another CPU's SIMD width) differs in its last
    digits, as a table's float cells do, and is compared as they are."""
    numbers = all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in (a, b))
    if not numbers or not (isinstance(a, float) or isinstance(b, float)):
        return float("nan")
    if not (np.isfinite(a) and np.isfinite(b)):
        return float("nan")
    reference = max(abs(a), abs(b))
    return abs(a - b) / reference if reference > 0 else float("nan")


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


def _messages(manifest: dict) -> list:
    """The message lists of a manifest that name input files: the run's warnings and the
    reader's warnings and notes (each a list, or absent)."""
    reader = (manifest.get("provenance") or {}).get("reader")
    reader = reader if isinstance(reader, dict) else {}
    found = [manifest.get("warnings"), reader.get("warnings"), reader.get("notes")]
    return [texts for texts in found if isinstance(texts, list)]


def _input_spellings(manifest: dict, names: set) -> dict:
    """File name -> the first quoted path in the manifest's messages ending in it."""
    spelled = {}
    for texts in _messages(manifest):
        for text in texts:
            for match in QUOTED_TEXT.finditer(str(text)):
                quoted = match.group(1) if match.group(1) is not None else match.group(2)
                name = re.split(r"[\\/]", quoted)[-1]
                if name in names:
                    spelled.setdefault(name, quoted)
    return spelled


def _messages_beside(recomputed: dict, result, directory) -> dict:
    """The rerun's manifest `recomputed` with its messages naming a recorded file
    relative to the verified folder `directory`, as that folder's writer recorded them
    (:func:`fluxpart.manifest.portable_messages`), not relative to the scratch folder
    the rerun was written to; `result` is the rerun (its warnings and provenance)."""
    out = json.loads(json.dumps(recomputed))
    provenance = escaped_paths(result.provenance)
    if isinstance(out.get("warnings"), list):
        out["warnings"] = portable_messages(list(result.warnings), provenance, directory)
    reader, again = (out.get("provenance") or {}).get("reader"), provenance.get("reader")
    for key in ("warnings", "notes"):
        if isinstance(reader, dict) and isinstance(again, dict) and key in reader and key in again:
            reader[key] = portable_messages(again[key], provenance, directory)
    return out


def respelled_inputs(stored: dict, recomputed: dict) -> tuple[dict, list]:
    """`recomputed` with each input file its messages name by another path than the
    `stored` messages do written as they do, and the (recomputed, stored) paths changed.

    A run given ``site.toml`` in the input's folder names ``'flux.csv'`` in its
    warnings; `verify` reruns it on the whole path (``'/data/site/flux.csv'``). Only a
    quoted path whose file name is that of a recorded input or site config is changed,
    and only where the stored messages name it by another path; the files' content is
    checked by SHA-256 before the rerun.

    Parameters
    ----------
    stored, recomputed : dict
        A result's manifest as its folder holds it, and its rerun's.

    Returns
    -------
    (dict, list of (str, str))
        The recomputed manifest (a copy where changed) and the paths changed.
    """
    names = {Path(str(entry["path"])).name for entry in path_entries(
        stored.get("provenance") or {}) if isinstance(entry.get("path"), str)}
    wanted, found = _input_spellings(stored, names), _input_spellings(recomputed, names)
    pairs = [(found[name], wanted[name]) for name in sorted(wanted)
             if name in found and found[name] != wanted[name]]
    if not pairs:
        return recomputed, []

    def respelled(text):
        if not isinstance(text, str):
            return text
        for path, spelling in pairs:
            text = text.replace(repr(path), repr(spelling)).replace(f'"{path}"', f'"{spelling}"')
        return text

    out = json.loads(json.dumps(recomputed))
    for texts in _messages(out):
        texts[:] = [respelled(text) for text in texts]
    return out, pairs


def _compare_manifests(stored: dict, recomputed: dict) -> list:
    pairs = []
    for key in _PATH_FREE:
        pairs += field_differences(stored.get(key, "(absent)"), recomputed.get(key, "(absent)"),
                                   key)
    pairs += field_differences(without_paths(stored.get("provenance", {})),
                               without_paths(recomputed.get("provenance", {})), "provenance")
    tables = {name: {k: v for k, v in entry.items() if k != "sha256"}
              for name, entry in (stored.get("tables") or {}).items() if isinstance(entry, dict)}
    again = {name: {k: v for k, v in entry.items() if k != "sha256"}
             for name, entry in (recomputed.get("tables") or {}).items()}
    pairs += [p for p in field_differences(tables, again, "tables")
              if p[0].count(".") > 1]              # whole tables are reported per table
    known = set(_PATH_FREE) | {"provenance", "tables", "seal", "unhashed", *_ENVIRONMENT_KEYS}
    for key in sorted(set(stored) - known):
        pairs.append((key, stored[key], "(absent)"))
    if stored.get("unhashed") != recomputed.get("unhashed"):
        pairs.append(("unhashed", stored.get("unhashed"), recomputed.get("unhashed")))
    # only what the run computed (provenance) rounds; a setting, the site or the seed is
    # read, not computed, and any change of it is a difference
    rounding = [(name, a, b, _float_relative(a, b) if name.startswith("provenance.")
                 else float("nan")) for name, a, b in pairs]
    out = [Difference("manifest", "rounding", column=name, stored=_text(a), recomputed=_text(b),
                      relative=relative)
           for name, a, b, relative in rounding if relative <= ROUNDING_TOLERANCE]
    shown = {name: _texts(a, b) for name, a, b, _ in rounding}
    pairs = [(name, a, b) for name, a, b, relative in rounding
             if not relative <= ROUNDING_TOLERANCE]
    out += [Difference("manifest", "manifest", column=name, stored=shown[name][0],
                       recomputed=shown[name][1])
            for name, _, _ in pairs[:_MAX_FIELDS_LISTED]]
    if len(pairs) > _MAX_FIELDS_LISTED:
        rest = [name for name, _, _ in pairs[_MAX_FIELDS_LISTED:]]
        out.append(Difference("manifest", "more", stored=", ".join(rest), count=len(rest)))
    return out


def _schema_record(path: Path) -> dict:
    """A Parquet file's metadata as a JSON-like dict: ``"<column> type"`` and
    ``"<column> <key>"`` (unit, description) for every field, and the table's own
    key-value metadata under its key (the fluxpart JSON parsed, so that
    :func:`field_differences` names e.g. ``fluxpart.site.utc_offset``)."""
    import pyarrow.parquet as pq

    from .store import parquet_source

    with parquet_source(path) as source:
        schema = pq.read_schema(source)
    out = {}
    for item in schema:
        out[f"{item.name} type"] = str(item.type)
        for key, value in (item.metadata or {}).items():
            out[f"{item.name} {key.decode(errors='replace')}"] = value.decode(errors="replace")
    for key, value in (schema.metadata or {}).items():
        text = value.decode(errors="replace")
        try:
            out[key.decode(errors="replace")] = json.loads(text)
        except ValueError:
            out[key.decode(errors="replace")] = text
    return out


def metadata_differences(stored: Path, recomputed: Path) -> list[tuple[str, str, str]]:
    """What differs between two Parquet files' schemas and metadata.

    Parameters
    ----------
    stored, recomputed : path
        The two Parquet files.

    Returns
    -------
    list of (key, stored, recomputed)
        One entry per differing item, sorted by key: a column's type, unit or
        description, or a key of the table metadata (e.g.
        ``fluxpart.site.utc_offset``); ``"(absent)"`` where one side lacks it; values
        other than text as JSON. Empty when the two files describe their columns and
        table alike.

    Notes
    -----
    Equal values with unequal metadata are a different result: a unit or the
    site's UTC offset changed in a table's metadata changes what its numbers mean
    to every reader (``fluxpart.load`` hands them to the modeller).

    The ``PANDAS_ATTRS`` copy of the metadata for ``pandas.read_parquet``
    (:data:`fluxpart.store.PANDAS_ATTRS_KEY`, written since 0.23.0) is
    compared where the stored file has it (an edited unit there is named like any
    other); a table written before it lacks the key, which is no difference: the
    key repeats the ``fluxpart`` metadata compared above.
    """
    from .store import PANDAS_ATTRS_KEY

    def text(value):
        return value if isinstance(value, str) else json.dumps(value, sort_keys=True)

    before, now = _schema_record(Path(stored)), _schema_record(Path(recomputed))
    copy = PANDAS_ATTRS_KEY.decode()
    if copy not in before:
        now.pop(copy, None)
    found = field_differences(before, now, "")
    return [(key, text(old), text(new)) for key, old, new in found]


#: The table metadata key of the time convention, in the fluxpart JSON and the pandas
#: copy (:func:`metadata_differences`).
_TIME_CONVENTION_KEYS = ("fluxpart.time_convention", "PANDAS_ATTRS.time_convention")


def earlier_wordings(table: str, found: list) -> tuple[list, list]:
    """Split a table's metadata differences into an earlier release's wording and the rest.

    Parameters
    ----------
    table : str
        The table's name in the manifest.
    found : list of (key, stored, recomputed)
        :func:`metadata_differences` of its stored file and its rerun.

    Returns
    -------
    known : list of (release, column)
        One per differing copy of a description (or the ``time_convention``) whose
        stored text is exactly the wording the releases before `release` wrote
        (:data:`fluxpart.schema.REWORDED_DESCRIPTIONS`).
    rest : list of (key, stored, recomputed)
        Everything else: a unit, a site fact, a description no release wrote (an
        edited folder), each still a difference.
    """
    known, rest = [], []
    for key, stored, recomputed in found:
        what, column = _metadata_item(key)
        entry = (reworded(table, column, stored) if what == "descriptions" else
                 reworded(table, None, stored) if key in _TIME_CONVENTION_KEYS else None)
        if entry is None:
            rest.append((key, stored, recomputed))
        else:
            known.append((entry.release, column or "time_convention"))
    return known, rest


def earlier_wording_notes(worded: dict, manifest: dict, others: bool = False) -> list[str]:
    """The notes of :func:`verify` on descriptions worded as an earlier release wrote them.

    Parameters
    ----------
    worded : dict
        Release that reworded them -> table -> columns (with repeats: a description is
        stored three times per column), from :func:`earlier_wordings`.
    manifest : dict
        The folder's manifest (its writing release is named where recorded).
    others : bool
        Whether anything else differs (a value, within rounding or not, another
        description, a manifest field): the note then says those differences stand
        apart from these words, not that the words are all that differs (a 0.34.0
        folder verified after widths52 read "every value ... equals the recomputation"
        below sixteen differing values; round review67).

    Returns
    -------
    list of str
        One note per rewording release, naming the tables and columns.
    """
    code = manifest.get("code") if isinstance(manifest.get("code"), dict) else {}
    writer = f"release {code['version']}" if code.get("version") else "an earlier release"
    notes = []
    for release, tables in sorted(worded.items()):
        columns = {table: sorted(set(named) - {"time_convention"})
                   for table, named in sorted(tables.items())}
        listed = [f"{table}: {', '.join(named)}" for table, named in columns.items() if named]
        # the time convention is every table's: named once, not in 15 lines (10-01 runs)
        timed = [table for table, named in tables.items() if "time_convention" in named]
        if timed:
            listed.append(f"the time_convention of {len(timed)} table(s)" if len(timed) > 3
                          else f"the time_convention of {', '.join(sorted(timed))}")
        listed = "; ".join(listed)
        tail = ("these words are no difference; the differences listed are apart from them"
                if others else "every value and every other description equals the "
                "recomputation, so the file bytes differ from the rerun's by these words only")
        notes.append(f"descriptions worded as {writer} wrote them, before {release} reworded "
                     f"them (fluxpart.schema.REWORDED_DESCRIPTIONS): {listed}; {tail}")
    return notes


def _lacks_pandas_copy(path: Path) -> bool:
    """Whether a stored table lacks the ``PANDAS_ATTRS`` metadata key (a table written
    before 0.23.0; :data:`fluxpart.store.PANDAS_ATTRS_KEY`)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    from .store import PANDAS_ATTRS_KEY, parquet_source

    try:
        with parquet_source(path) as source:
            return PANDAS_ATTRS_KEY not in (pq.read_schema(source).metadata or {})
    except (OSError, ValueError, pa.ArrowException):
        return False


#: What another library version may do to the numbers (an environment line's end), and
#: what it did where every table was recomputed bit for bit: "may differ" beside
#: "bit-identical" read as a doubt the verdict had settled (round faults43).
_MAY_DIFFER = "; numbers may differ in their last digits"
_DID_NOT_DIFFER = "; every table is bit-identical all the same"


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


# --------------------------------------------------------------------------- inputs

def _matching(path: Path | None, sha: str | None) -> bool:
    return path is not None and path.is_file() and file_sha256(path) == sha


def _recorded_copy(recorded: dict, scratch: Path) -> Path | None:
    """Write the site config text recorded in the manifest to `scratch`; None if absent."""
    import hashlib

    text = recorded.get("text")
    if not isinstance(text, str):
        return None
    data = text.encode("utf-8")
    if hashlib.sha256(data).hexdigest() != recorded.get("sha256"):
        return None
    copy = scratch / (Path(str(recorded.get("path", "site.toml"))).name or "site.toml")
    copy.write_bytes(data)
    return copy


def _same_but_input_path(path: Path, copy: Path | None) -> bool:
    """True when two site configs differ at most in ``[input] path``."""
    import tomllib

    if copy is None:
        return False
    try:
        documents = [tomllib.loads(p.read_text(encoding="utf-8-sig")) for p in (path, copy)]
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return False
    for document in documents:
        if isinstance(document.get("input"), dict):
            document["input"].pop("path", None)
    return documents[0] == documents[1]


def _config_changes(path: Path, copy: Path | None, limit: int = 5) -> str:
    """The settings in which the site config at `path` differs from the recorded `copy`.

    Returns text such as ``"; changed since the run: [processing] seed 0 -> 1"``
    (at most `limit` keys named, the rest counted), or "" where either file cannot
    be read as TOML or they hold the same settings.
    """
    import tomllib

    if copy is None:
        return ""
    try:
        now, then = (tomllib.loads(p.read_text(encoding="utf-8-sig")) for p in (path, copy))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return ""

    def flat(document, prefix=""):
        out = {}
        for key, value in document.items():
            if isinstance(value, dict):
                out.update(flat(value, f"{prefix}{key}."))
            else:
                out[f"{prefix}{key}"] = value
        return out

    now, then = flat(now), flat(then)
    missing = object()
    changed = [key for key in sorted(set(now) | set(then))
               if now.get(key, missing) != then.get(key, missing)]
    if not changed:
        return ""

    def shown(value):
        return "(absent)" if value is missing else repr(value)

    def name(key):
        section, _, leaf = key.rpartition(".")
        return f"[{section}] {leaf}" if section else leaf

    parts = [f"{name(key)} {shown(then.get(key, missing))} -> {shown(now.get(key, missing))}"
             for key in changed[:limit]]
    more = f" and {len(changed) - limit} more" if len(changed) > limit else ""
    return "; changed since the run: " + ", ".join(parts) + more


def _why_not_a_file(path: Path, hint: str = "") -> str:
    """Why a path given as a file is none: a folder (the input's folder given for the file
    was called missing) or nothing there."""
    if path.is_dir():
        return f"is a folder, not a file: give the file itself{hint}"
    if path.exists():
        # a named pipe or a device (`--input <(zcat x.gz)`, /dev/stdin) was "does not exist"
        return ("is not a plain file (a pipe or a device); give the file itself (unpacked "
                f"where it was compressed){hint}")
    return broken_link(path) or "does not exist"


def _site_config(directory: Path, recorded: dict, given, scratch: Path, notes: list):
    """Return (site config for the rerun, site config that locates the input, difference).

    A config given with ``--config`` must have the recorded SHA-256, or differ from
    the recorded text only in its ``[input] path`` (an auditor pointing it at a
    moved input): then the recorded text drives the rerun and the given file
    locates the input. The config at the recorded place is used the same way.
    """
    sha = recorded.get("sha256")
    if given is not None:
        path = Path(given)
        if not path.is_file():
            raise InputFileError(f"verify: the site config {str(path)!r} given with --config "
                                 f"{_why_not_a_file(path)}")
        if file_sha256(path) == sha:
            return path, path, None
        copy = _recorded_copy(recorded, scratch)
        if _same_but_input_path(path, copy):
            notes.append(f"site config: {str(path)!r} is not the recorded file but holds its "
                         "settings (it differs at most in [input] path, comments, layout or "
                         "line endings); the recorded text was used, the given file only to "
                         "find the input")
            return copy, path, None
        # the settings that differ named, as for a config edited where it lies (a seed
        # changed between run and verify was only "not the site config", mistakes48)
        changes = _config_changes(path, copy)
        return None, None, Difference(
            "input", "input", column="site config", row=str(path), stored=str(sha),
            recomputed=file_sha256(path),
            cause=("it is not the site config the result was computed from" + changes)
            if changes else "")
    path = recorded_path(directory, recorded)
    if _matching(path, sha):
        return path, path, None
    copy = _recorded_copy(recorded, scratch)
    if path is not None and path.is_file() and _same_but_input_path(path, copy):
        # edited where it lies to point at a moved or renamed input, as --config allows
        notes.append(f"site config: {str(path)!r} is not the recorded file but holds its "
                     "settings (it differs at most in [input] path, comments, layout or line "
                     "endings); the recorded text was used, the file only to find the input")
        return copy, path, None
    if copy is not None:
        where = (f"the file at {str(path)!r} {CONFIG_EDITED}{_config_changes(path, copy)}"
                 if path is not None and path.is_file() else f"it is not at {str(path)!r}")
        notes.append(f"site config: {where}; used the copy of its text recorded in the "
                     "manifest (SHA-256 checked)")
        return copy, None, None
    if path is not None and path.is_file():
        return None, None, Difference("input", "input", column="site config", row=str(path),
                                      stored=str(sha), recomputed=file_sha256(path))
    raise InputFileError(f"verify: the site config {str(path)!r} recorded in the manifest "
                         "does not exist and the manifest holds no copy of it; give it with "
                         "--config")


def _in_recorded_order(wanted: list, given: list, config_sha=None) -> list:
    """The files given with ``--input`` put in the recorded order by their SHA-256.

    A file whose content is the recorded one is matched whatever its name or its
    place among the ``--input`` options; files that match nothing keep their places
    (and are reported as another input). A file that is the recorded site config
    is a usage error: the two options were swapped.
    """
    digests = [file_sha256(path) for path in given]
    for path, digest in zip(given, digests, strict=True):
        if config_sha and digest == config_sha and all(digest != entry.get("sha256")
                                                       for entry in wanted):
            raise InputFileError(f"verify: {str(path)!r} given with --input is the recorded "
                                 "site config, not an input file; give the site config with "
                                 "--config and the input file(s) with --input")
    unused = list(range(len(given)))
    order = [None] * len(wanted)
    for number, entry in enumerate(wanted):
        match = next((i for i in unused if digests[i] == entry.get("sha256")), None)
        if match is not None:
            order[number] = given[match]
            unused.remove(match)
    leftover = iter(given[i] for i in unused)
    return [path if path is not None else next(leftover) for path in order]


def _input_files(directory: Path, recorded: dict, given, config_path: Path | None,
                 config_sha, scratch: Path, notes: list):
    """Return (input path or list of paths, difference or None).

    One file: the file given with ``--input``, else the one at the recorded path
    (relative to the result folder), else the one the site config names; it must
    have the recorded SHA-256. Several files (``recorded["files"]``): each is
    looked for likewise, ``--input`` given once per file in any order (matched by
    SHA-256); each must have its recorded SHA-256. A file given with ``--input``
    that is the recorded site config (`config_sha`) is refused as swapped options. A file
    holding the recorded text re-saved otherwise (line endings, encoding) is restored to
    the recorded bytes in `scratch` and used, with a note (:func:`_restored_text`).

    Where a file of several differs, the difference names the first, and the paths
    returned are every file as it is now (to locate the edit,
    :func:`fluxpart.input_changes.located_changes`); None where one of the others cannot
    be found (the first difference stands alone, as before).
    """
    parts = recorded.get("files") if isinstance(recorded.get("files"), list) else None
    wanted = parts if parts else [recorded]
    given = [] if given is None else [given] if isinstance(given, (str, Path)) else list(given)
    for path in given:
        if not Path(path).is_file():
            raise InputFileError(f"verify: the input file {str(path)!r} given with --input "
                                 f"{_why_not_a_file(Path(path), ' (one --input per file)')}")
    if given and len(given) != len(wanted):
        raise InputFileError(f"verify: the result was computed from {len(wanted)} input "
                             f"file(s); give --input once for each ({len(given)} given)")
    beside_config = []
    if config_path is not None and not given:
        from .io import read_site_config

        try:
            beside_config = list(read_site_config(config_path).input_paths)
        except FluxpartError:
            beside_config = []
    if given:
        given = _in_recorded_order(wanted, [Path(p) for p in given], config_sha)
    at_run = [] if given else _places_at_run(directory, wanted)
    found, first, moved = [], None, []
    for number, entry in enumerate(wanted):
        sha = entry.get("sha256")
        if given:
            path = Path(given[number])
        elif first is not None and not _findable(directory, entry, beside_config + at_run):
            return None, first       # the edit is named by its file alone, as before
        else:
            path = recorded_path(directory, entry)
            if not _matching(path, sha):
                path = next((p for p in beside_config if _matching(p, sha)), path)
            if not _matching(path, sha) and _matching(at_run[number], sha):
                # a result moved or copied elsewhere on the machine that wrote it, its
                # input left in place, had been "does not exist; give --input" (round
                # faults43); the recorded SHA-256 decides, as for any file found
                moved.append((path, at_run[number]))
                path = at_run[number]
            packed = None if path is None or path.exists() else _packed_beside(
                path, sha, scratch, number)
            if packed is not None:
                notes.append(f"input file: {str(path)!r} is gone, and {packed[0].name!r} "
                             "beside it holds its recorded bytes compressed or re-saved "
                             "(compressed to archive it after the run?); restored, they have "
                             "the recorded "
                             f"SHA-256 {sha}, and those bytes were rerun")
                found.append(packed[1])
                continue
            if path is None or not path.is_file():
                broken = "" if path is None else broken_link(path)
                if broken:
                    raise InputFileError(f"verify: the input file {str(path)!r} recorded in "
                                         f"the manifest {broken.split(';')[0]}; point the "
                                         "link at the file again, or give the file's "
                                         "location with --input")
                if path is not None and path.exists():
                    # a folder or a pipe now at the recorded name was "does not exist",
                    # though the auditor sees it there
                    kind = "a folder" if path.is_dir() else "a pipe or a device"
                    raise InputFileError(f"verify: the input file {str(path)!r} recorded in "
                                         f"the manifest is now {kind}, not a plain file (the "
                                         "result was computed from a file of that name): put "
                                         "the file back, or give its location with --input")
                raise InputFileError(f"verify: the input file {str(path)!r} recorded in the "
                                     "manifest (relative to the result folder) does not exist"
                                     f"{_packed_not_taken(path)}; give its new location with "
                                     "--input")
        actual = file_sha256(path)
        if actual != sha:
            restored = _restored_text(path, sha, scratch, number)
            if restored is None:
                changed = Difference("input", "input", column="input file", row=str(path),
                                     stored=str(sha), recomputed=actual)
                other = None if given else _recorded_one_where_run_read(
                    directory, entry, number, wanted, path)
                notes.extend([other] if other else [])
                if not parts:
                    return None, changed
                # several files: the others are looked for too, so that the whole input
                # as it is now can be read and compared with the values the result holds
                first = first or changed
                found.append(path)
                continue
            notes.append(f"input file: {str(path)!r} holds the recorded file's text re-saved "
                         "otherwise (line endings, byte-order mark, encoding, final line "
                         "break or gzip: git core.autocrlf, unzip -a, an editor, an "
                         "archive); converted back, "
                         f"its bytes have the recorded SHA-256 {sha}, and those bytes were "
                         "rerun")
            path = restored
        found.append(path)
    if moved:
        notes.append(_found_where_run_read(moved))
    return (found if parts else found[0]), first


def _found_where_run_read(moved: list) -> str:
    """The note for input files found where the run read them, not beside the result:
    `moved` holds (recorded place now, place at the run) of each; one note for all,
    naming each file and every folder (review66: several files named the first alone)."""
    if len(moved) == 1:
        (recorded, read), = moved
        return (f"input file: not at the recorded place beside the result folder, "
                f"{str(recorded)!r} (the folder was moved or copied since the run); found "
                f"where the run read it ({RUN_LOG}), {str(read)!r}, with the recorded SHA-256")

    def folders(paths) -> str:
        shown = list(dict.fromkeys(str(Path(p).parent) for p in paths))
        return ", ".join(repr(f) for f in shown[:3]) + (
            f" and {len(shown) - 3} more" if len(shown) > 3 else "")

    names = [Path(read).name for _, read in moved]
    named = ", ".join(names[:3]) + (f" and {len(names) - 3} more" if len(names) > 3 else "")
    return (f"{len(moved)} input files ({named}): not at their recorded places beside the "
            f"result folder, in {folders(r for r, _ in moved)} (the folder was moved or "
            f"copied since the run); found where the run read them ({RUN_LOG}), in "
            f"{folders(r for _, r in moved)}, each with its recorded SHA-256")


def _places_at_run(directory: Path, wanted: list) -> list:
    """Where the run read each recorded input file that is not at its recorded place
    (None where something is there, or not known): its recorded path, relative to the
    result folder, taken from the folder's place at the run.

    The run log (never hashed) records the folder and the working folder of the run;
    a file found there is used only with its recorded SHA-256, so an edited log can
    point at no other input than the one the manifest records.
    """
    places = []
    for entry, then in zip(wanted, _read_at_run(directory, wanted), strict=True):
        here = recorded_path(directory, entry) if then is not None else None
        # only where nothing is at the recorded place: a file edited there, a link or a
        # folder is what the auditor gave and is reported as before
        gone = here is not None and not os.path.lexists(here)
        places.append(then if gone else None)
    return places


def _read_at_run(directory: Path, wanted: list) -> list:
    """Where the run read each recorded input file given by a relative path (None where
    not known, or where the result folder is where the run wrote it), from the run log's
    result folder and working folder."""
    log = _read_run_log(directory) or {}
    folder, working = log.get("result_folder"), log.get("working_directory")
    if not isinstance(folder, str) or not isinstance(working, str) \
            or not os.path.isabs(os.path.join(working, folder)):   # "unknown" working folder
        return [None] * len(wanted)
    then = Path(os.path.abspath(os.path.join(working, folder)))
    if then == Path(os.path.abspath(directory)):
        return [None] * len(wanted)
    places = []
    for entry in wanted:
        text = entry.get("path") if isinstance(entry, dict) else None
        relative = isinstance(text, str) and text and not Path(text).is_absolute()
        places.append(Path(os.path.abspath(then / text)) if relative else None)
    return places


def _recorded_one_where_run_read(directory: Path, entry: dict, number: int, wanted: list,
                                 path: Path) -> str | None:
    """The note where the input file at the recorded place is another file of its name
    and the one with the recorded SHA-256 is still where the run read it (review66: two
    files of one name, the verdict said only that this one is not the input)."""
    then = _read_at_run(directory, wanted)[number]
    if then is None or then == Path(os.path.abspath(path)) \
            or not _matching(then, entry.get("sha256")):
        return None
    return (f"input file: {str(path)!r} is another file of that name; the one with the "
            f"recorded SHA-256 is where the run read it ({RUN_LOG}), {str(then)!r}: to "
            "verify the result against it, give it with --input")


def _findable(directory: Path, entry: dict, beside_config: list) -> bool:
    """Whether a recorded input file is at its recorded place or beside the site config."""
    path = recorded_path(directory, entry)
    if path is not None and path.is_file():
        return True
    return any(_matching(p, entry.get("sha256")) for p in beside_config)


#: Text encodings an editor or a shell may re-save a text file in, told from its
#: byte-order mark (the Unicode standard, section 23.8); without one, UTF-8 is tried.
_MARKS = ((codecs.BOM_UTF32_LE, "utf-32"), (codecs.BOM_UTF32_BE, "utf-32"),
          (codecs.BOM_UTF8, "utf-8-sig"), (codecs.BOM_UTF16_LE, "utf-16"),
          (codecs.BOM_UTF16_BE, "utf-16"))


def _text_variants(data: bytes):
    """Yield (bytes, change) for the re-savings of `data` that keep its text.

    A text file re-saved "with the same content" may get its line endings converted
    (CR LF for LF or the reverse: git core.autocrlf, ``unzip -a``), a byte-order mark
    added or dropped, another Unicode encoding (UTF-16 from Windows Notepad or
    PowerShell 5.1), or a final line break added or dropped (most editors): each
    variant undoes a combination of these, written as UTF-8. Nothing for bytes that
    are not Unicode text.
    """
    encoding = next((name for mark, name in _MARKS if data.startswith(mark)), "utf-8")
    try:
        text = data.decode(encoding)
    except UnicodeDecodeError:
        return
    unix = text.replace("\r\n", "\n")
    bare = unix.rstrip("\n")
    for body in dict.fromkeys((unix, bare, bare + "\n")):
        for newline in ("\n", "\r\n"):
            for mark in (b"", codecs.BOM_UTF8):
                yield mark + body.replace("\n", newline).encode("utf-8")


def _restored_text(path: Path, sha, scratch: Path, number: int) -> Path | None:
    """The recorded input file restored from `path` in `scratch`, or None.

    Where `path` holds the recorded file's text re-saved otherwise (line endings,
    byte-order mark, Unicode encoding, final line break: :func:`_text_variants`), or
    compressed (gzip, bzip2 or xz: the name then loses the tool's suffix), and one
    variant gives back the recorded SHA-256 exactly, the recorded bytes are known whole:
    a copy of them is written under the same file name (its suffix chooses the reader)
    in a folder of its own in `scratch` and returned. Any other difference gives None.

    Memory stays bounded whatever the file: a compressed file is unpacked a chunk at a
    time and given up past `MOST_UNPACKED_BYTES` (a decompression bomb), and re-savings
    are looked for only in files of at most `MOST_RESAVED_BYTES` (each variant is a copy
    in memory); a larger file that differs stays a difference.

    References
    ----------
    NIST (2015). FIPS 180-4: Secure Hash Standard (SHA-256: equal digests stand for
    equal bytes).
    Deutsch, P. (1996). RFC 1952: GZIP file format specification version 4.3.
    Seward, J. bzip2 and libbzip2: the .bz2 file format (m); Tukaani (2009). The .xz file
    format, version 1.0.4 (the magic bytes of :data:`PACKED_FORMS`).
    """
    unpacked = _unpacked(path)
    if unpacked is not None:
        # compressed for the archive; the recorded file may be the text inside, as it is
        # or re-saved
        digest, data, suffix = unpacked
        name = path.stem if path.suffix.lower() == suffix else path.name
        if digest == sha:
            return (_restored_copy(data, name, scratch, number) if data is not None
                    else _unpacked_copy(path, suffix, sha, name, scratch, number))
    else:
        name = path.name
        try:
            data = path.read_bytes() if path.stat().st_size <= MOST_RESAVED_BYTES else None
        except OSError:
            return None
    if data is None:
        return None
    for converted in _text_variants(data):
        if converted != data and hashlib.sha256(converted).hexdigest() == sha:
            return _restored_copy(converted, name, scratch, number)
    return None


#: The compressions a user applies to a file to archive it, by their magic bytes and the
#: suffix their tools add: gzip (RFC 1952: 1f 8b), bzip2 ("BZh", Seward's bzip2 file
#: format (m)) and xz (FD "7zXZ" 00, the .xz file format 1.0.4, Tukaani 2009).
PACKED_FORMS = ((b"\x1f\x8b", ".gz"), (b"BZh", ".bz2"), (b"\xfd7zXZ\x00", ".xz"))

#: Most bytes of a file in which re-savings of the recorded text are looked for (held in
#: memory several times over): 256 MiB, about a hundred site-years of half-hourly records
#: of 150 bytes (17 520 records a year), far more than one tower's input file.
MOST_RESAVED_BYTES = 2**28

#: Most bytes unpacked from a compressed file before it is given up: 4 GiB, the largest
#: file verify hashes elsewhere; a small file that unpacks to more (a decompression bomb:
#: DEFLATE reaches about 1000:1, bzip2 and xz far more) cannot hold a tower's input.
MOST_UNPACKED_BYTES = 4 * 2**30

_CHUNK_BYTES = 2**20


def _packed_opener(suffix: str):
    """The standard library's reader of the compression `suffix` (of `PACKED_FORMS`), or
    None where this Python was built without it (bz2 and lzma are optional modules)."""
    module = {".gz": gzip, ".bz2": bz2, ".xz": lzma}[suffix]
    return None if module is None else module.open


def _packed_chunks(path: Path, suffix: str):
    """Yield the unpacked bytes of the compressed file `path` a chunk at a time; raise
    ValueError past `MOST_UNPACKED_BYTES`, and the reader's error where it is damaged."""
    size = 0
    with _packed_opener(suffix)(path, "rb") as stream:
        while chunk := stream.read(_CHUNK_BYTES):
            size += len(chunk)
            if size > MOST_UNPACKED_BYTES:
                raise ValueError(f"unpacks to more than {MOST_UNPACKED_BYTES} bytes")
            yield chunk


#: What a damaged or over-long compressed file raises while it is unpacked.
_UNPACK_ERRORS = (OSError, EOFError, ValueError, zlib.error) + (
    (lzma.LZMAError,) if lzma is not None else ())


def _unpacked(path: Path) -> tuple[str, bytes | None, str] | None:
    """(the SHA-256 of the bytes inside, those bytes or None where more than
    `MOST_RESAVED_BYTES`, the tool's suffix) where the file `path` is one of
    `PACKED_FORMS` whole, else None (not compressed, damaged, unreadable, or unpacking
    to more than `MOST_UNPACKED_BYTES`). Unpacked a chunk at a time, so memory stays
    bounded (a decompression bomb beside a recorded input exhausted it)."""
    try:
        with path.open("rb") as handle:
            head = handle.read(8)
    except OSError:
        return None
    suffix = next((tail for magic, tail in PACKED_FORMS if head.startswith(magic)), None)
    if suffix is None or _packed_opener(suffix) is None:
        return None
    digest, held, size = hashlib.sha256(), [], 0
    try:
        for chunk in _packed_chunks(path, suffix):
            digest.update(chunk)
            size += len(chunk)
            if held is not None and size <= MOST_RESAVED_BYTES:
                held.append(chunk)
            else:
                held = None
    except _UNPACK_ERRORS:
        return None
    return digest.hexdigest(), (b"".join(held) if held is not None else None), suffix


def _unpacked_copy(path: Path, suffix: str, sha, name: str, scratch: Path,
                   number: int) -> Path | None:
    """Unpack the compressed file `path` (too large to hold) as `name` in a folder of
    its own in `scratch`, a chunk at a time; None (and nothing left) where the bytes
    written do not have the SHA-256 `sha` (the file changed since it was hashed)."""
    folder = scratch / f"restored-input-{number}"
    folder.mkdir(parents=True, exist_ok=True)
    target, digest = folder / name, hashlib.sha256()
    try:
        with target.open("wb") as out:
            for chunk in _packed_chunks(path, suffix):
                digest.update(chunk)
                out.write(chunk)
    except _UNPACK_ERRORS:
        target.unlink(missing_ok=True)
        return None
    if digest.hexdigest() != sha:
        target.unlink(missing_ok=True)
        return None
    return target


def _packed_beside(path: Path, sha, scratch: Path, number: int):
    """(the compressed file, the recorded bytes restored from it) where the recorded
    input `path` is gone and ``NAME.gz``, ``.bz2`` or ``.xz`` beside it holds its bytes
    exactly (the input compressed to archive it after the run: ``gzip tower.csv``
    deletes tower.csv), else None. The recorded SHA-256 decides, as for any file found
    (round faults47: "does not exist; give --input" before, though the bytes were
    beside it)."""
    for _, suffix in PACKED_FORMS:
        packed = path.with_name(path.name + suffix)
        if packed.is_file():
            restored = _restored_text(packed, sha, scratch, number)
            if restored is not None:
                return packed, restored
    return None


def _packed_not_taken(path) -> str:
    """"; NAME.gz beside it does not hold ..." naming the compressed files beside the gone
    input `path` that :func:`_packed_beside` did not take (other bytes, damaged, or past
    `MOST_UNPACKED_BYTES`), or "": "does not exist" alone sent the auditor looking for
    a file that was there (round review83)."""
    if path is None:
        return ""
    beside = [path.name + suffix for _, suffix in PACKED_FORMS
              if path.with_name(path.name + suffix).is_file()]
    if not beside:
        return ""
    return (f"; {', '.join(map(repr, beside))} beside it does not hold its recorded bytes "
            f"(its unpacked bytes, re-saved or not, do not have the recorded SHA-256, or it "
            f"is damaged or unpacks to more than {MOST_UNPACKED_BYTES >> 30} GiB)")


def _restored_copy(data: bytes, name: str, scratch: Path, number: int) -> Path:
    """Write the recorded bytes `data` as `name` in a folder of its own in `scratch`."""
    folder = scratch / f"restored-input-{number}"
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / name
    target.write_bytes(data)
    return target


def _recompute(directory: Path, manifest: dict, input_path, config_path, scratch: Path,
               notes: list, stored_timeseries=None):
    """Return (source, result or None, input differences).

    An input file that is not the recorded one is compared with the input values the
    stored time series holds (`stored_timeseries`, :func:`fluxpart.input_changes.
    located_changes`), so the difference says what was edited."""
    from .pipeline import process, process_site_config

    provenance = manifest["provenance"]

    def recorded_config() -> Config:
        return Config.from_mapping(manifest["config"], where="manifest config:")

    if "demo" in provenance:
        config = recorded_config()
        from . import demo

        config = _as_written(config, manifest, set(), notes)
        recorded = provenance["demo"]
        variant = recorded.get("variant", "c3")
        frame, _ = demo.site_year(seed=recorded.get("seed", 0), variant=variant)
        if recorded.get("as_recorded"):
            frame = demo.as_recorded(frame)
        result = process(frame, demo.site(variant), config,
                         provenance={"demo": recorded})
        return "demo", result, []
    if not isinstance(provenance.get("input"), dict) or \
            not isinstance(provenance.get("site_config"), dict):
        raise InputFileError("verify: the manifest records neither an input file and site "
                             "config (fluxpart run) nor a demo seed (fluxpart demo), so the "
                             "result cannot be recomputed")
    recorded_input = provenance["input"]
    input_digests = {entry.get("sha256") for entry in (
        recorded_input.get("files") if isinstance(recorded_input.get("files"), list)
        else [recorded_input]) if isinstance(entry, dict)}
    if config_path is not None and Path(config_path).is_file() \
            and file_sha256(Path(config_path)) in input_digests:
        raise InputFileError(f"verify: {str(config_path)!r} given with --config is a recorded "
                             "input file, not the site config; give the site config with "
                             "--config and the input file(s) with --input")
    site_config, locating, changed = _site_config(directory, provenance["site_config"],
                                                  config_path, scratch, notes)
    if changed is not None:
        return "run", None, [changed]
    data_path, changed = _input_files(directory, recorded_input, input_path, locating,
                                      provenance["site_config"].get("sha256"), scratch, notes)
    if changed is not None:
        several = isinstance(recorded_input.get("files"), list)
        if changed.column == "input file" and (data_path is not None or not several):
            from .input_changes import located_changes

            reader = provenance.get("reader")
            # several files: all of them as they are now, read together as the run did
            located = located_changes(site_config, data_path if several
                                      else Path(changed.row), stored_timeseries,
                                      reader.get("columns") if isinstance(reader, dict)
                                      else None)
            if located:
                changed = dataclasses.replace(
                    changed, cause="it is not the input file the result was computed "
                                   f"from; {located}{_packed_note(recorded_input, changed.row)}")
        return "run", None, [changed]
    if provenance.get("settings") == "site config":
        # the settings came from the site config's [processing] table: rerun from it,
        # so that a setting edited in the manifest is named as a differing field (also
        # one the manifest holds out of range, which is not read as settings at all)
        threshold = None
        if _fixed_without_threshold(site_config):
            # a result of a version before 0.24.0 took the default threshold: rerun it so
            # (the manifest's settings are read only then)
            recorded = recorded_config()
            threshold = recorded.ustar_threshold if recorded.ustar_method == "fixed" else None
        config = Config.from_toml(site_config, recorded_threshold=threshold)
        if threshold is not None:
            notes.append(f'site config: [processing] ustar_method = "fixed" without '
                         f"ustar_threshold is refused for new runs since 0.24.0; rerun "
                         f"with the threshold the result recorded, {threshold:g} m s-1 "
                         f"(write ustar_threshold = {threshold:g} in the site config to run "
                         "it again)")
        as_read = config
        config = _as_written(config, manifest, set(_processing_table(site_config)), notes)
        result = process_site_config(site_config, config, input_path=data_path)
        if config != as_read:
            # the site config's settings as the writing release read them: the rerun
            # records them as the site config's, as that release did (not as the
            # caller's, which only a setting the file does not name made them)
            result = dataclasses.replace(
                result, provenance={**result.provenance, "settings": "site config"},
                _computed=None)
        return "run", result, []
    config = _as_written(recorded_config(), manifest, set(), notes)
    return "run", process_site_config(site_config, config, input_path=data_path), []


def _processing_table(site_config) -> dict:
    """The site config's ``[processing]`` table ({} where it has none)."""
    from ._validate import read_toml

    processing = read_toml(site_config, "site config").get("processing", {})
    return processing if isinstance(processing, dict) else {}


def _as_written(config: Config, manifest: dict, named: set, notes: list) -> Config:
    """`config` with each setting added after the writing release
    (:func:`fluxpart.config.absent_added_settings` of the manifest's ``config``) at
    the value of the releases before it, unless the site config names it (`named`);
    one line in `notes` per setting so taken."""
    earlier = [added for added in absent_added_settings(manifest.get("config"))
               if added.name not in named]
    for added in earlier:
        notes.append(f"{added.name} is absent from the recorded settings (added in "
                     f"{added.release}): rerun with {json.dumps(added.earlier)}, the "
                     "behaviour of the release that wrote the folder")
    return dataclasses.replace(config, **{added.name: added.earlier for added in earlier})


def _fixed_without_threshold(site_config) -> bool:
    """True where the site config's ``[processing]`` sets ``ustar_method = "fixed"``
    without ``ustar_threshold`` (refused for runs since 0.24.0)."""
    processing = _processing_table(site_config)
    return processing.get("ustar_method") == "fixed" and "ustar_threshold" not in processing


# --------------------------------------------------------------------------- public

#: Name of a rerun's scratch folder in the system's temporary folder: prefix, the
#: verifying process's id, a random part.
_SCRATCH_PREFIX = "fluxpart-verify-"
_SCRATCH = re.compile(rf"{re.escape(_SCRATCH_PREFIX)}(\d+)-")


def _alive(pid: int) -> bool:
    """Whether a process with id `pid` exists (one of another user counts as alive)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError):   # another user's, or no such id at all
        return True
    return True


def remove_dead_scratch(root=None) -> list[str]:
    """Remove rerun scratch folders that a killed ``verify`` left behind.

    A folder is removed only where its name carries the id of a process that no longer
    exists and it belongs to the current user: a verify running now, or another user's,
    keeps its folder. Returns the names removed.
    """
    root = Path(tempfile.gettempdir() if root is None else root)
    removed = []
    try:
        entries = list(root.iterdir())
    except OSError:
        return removed
    for entry in entries:
        match = _SCRATCH.match(entry.name)
        if not match or _alive(int(match[1])):
            continue
        try:
            if entry.is_symlink() or not entry.is_dir() or entry.stat().st_uid != os.getuid():
                continue
        except OSError:
            continue
        shutil.rmtree(entry, ignore_errors=True)
        if not entry.exists():
            removed.append(entry.name)
    return removed


@contextmanager
def scratch_folder():
    """A rerun's scratch folder in the system's temporary folder, removed however the
    block ends.

    A stop (SIGTERM, Ctrl-C: an exception raised by the command line's handler) that
    came between :func:`tempfile.mkdtemp` making the folder and
    :class:`tempfile.TemporaryDirectory` registering its removal left it behind (once in
    15 SIGTERMs sent as the folder appeared, round faults45); on such a stop (an
    exception that is no :class:`Exception`) the folders of this process's id are then
    removed, as the process is ending; an error removes only the block's own folder.

    Yields
    ------
    pathlib.Path
        The folder, named ``fluxpart-verify-<process id>-<random>``.
    """
    try:
        with tempfile.TemporaryDirectory(prefix=f"{_SCRATCH_PREFIX}{os.getpid()}-") as made:
            yield Path(made)
    except Exception:
        # an error, not a stop: its own folder is removed by TemporaryDirectory, and a
        # folder of another verify of this process (a caller's threads) is left in use
        # (review69: every folder of the process was removed on any error)
        raise
    except BaseException:
        own = f"{_SCRATCH_PREFIX}{os.getpid()}-"
        for entry in Path(tempfile.gettempdir()).glob(f"{own}*"):
            if entry.is_dir() and not entry.is_symlink():
                shutil.rmtree(entry, ignore_errors=True)
        raise


#: Endings of a recorded input that the run unpacked (a tar, zip or compressed file of
#: one table, :func:`fluxpart.io._decompressed`).
_PACKED = (".tar", ".tgz", ".tar.gz", ".tar.bz2", ".tar.xz", ".zip", ".gz", ".bz2", ".xz")


def _packed_note(recorded_input: dict, given) -> str:
    """The clause naming the archive the run read where the file given is another.

    A result run from ``tower.tar.gz`` verified with the table unpacked from it gave
    "every value equals the input the result holds: the change lies outside the values
    read (another column, a comment, spaces or the layout)" and nothing of the archive
    (review64): the run's input is the archive's bytes, which the table alone cannot
    give back.
    """
    name = Path(str(recorded_input.get("path", ""))).name
    if not name.lower().endswith(_PACKED) or Path(str(given)).name == name:
        return ""
    return (f"; the run read {name!r} (an archive or compressed file whose table this may "
            "be: the recorded SHA-256 is of its packed bytes; give it with --input)")


def _file_changed(table: str, differences) -> bool:
    """Whether the folder check found `table`'s file other than the recorded one (its
    SHA-256)."""
    return any(d.table == table and d.kind == "hash" for d in differences)


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


def verify(directory, *, input_path=None, config_path=None, exact: bool = False
           ) -> VerifyReport:
    """Recompute a result folder from its manifest and compare everything.

    Parameters
    ----------
    directory : path-like
        Folder written by ``fluxpart run``, ``fluxpart demo`` or ``Result.write``.
    input_path : path-like or list of path-like, optional
        The input file (one per file for a result read from several), if it is
        not where the manifest says (relative to the result folder); each must
        have its recorded SHA-256.
    config_path : path-like, optional
        The site config, likewise; without it, the one at the recorded place or
        else the copy of its text in the manifest is used.
    exact : bool, optional
        Demand bit identity: rounding differences become failures.

    Returns
    -------
    VerifyReport
        See the module docstring for the verdicts.

    Raises
    ------
    InputFileError
        If the folder has no manifest, or the recorded input cannot be found
        (the message says how to point to a moved input).
    ConfigError
        If the manifest's settings are invalid.
    FluxpartError
        If the recorded input can no longer be read or processed.
    """
    from .resultdir import recover_missing

    directory = Path(directory).absolute()
    # a write interrupted between its two renames: the earlier result put back, and said
    restored = recover_missing(directory, notify=lambda text: None)
    manifest, differences, folder_notes, stored_tables = _read_stored(directory)
    if restored:
        folder_notes = [restored.removeprefix("note: "), *folder_notes]
    run_log = _read_run_log(directory) if differences else None
    environment, code_changed = _environment(manifest)
    identity = result_identity(manifest)
    recorded = recorded_facts(manifest)
    provenance = manifest["provenance"]
    if "demo" not in provenance and not (isinstance(provenance.get("input"), dict)
                                         and isinstance(provenance.get("site_config"), dict)):
        # written from Python (Result.write) without an input file: only the folder's
        # integrity can be checked, and a tampered folder is still a failed verification
        if differences:
            return VerifyReport(directory=directory, identity=identity, recorded=recorded, source="none",
                                tables=tuple(sorted(stored_tables)),
                                differences=tuple(differences), environment=tuple(environment),
                                code_changed=code_changed, exact=exact,
                                notes=tuple(folder_notes),
                                replaced_manifest=replaced_manifest(differences, manifest,
                                                                    run_log=run_log))
        raise InputFileError("verify: the folder matches its manifest (seal and every table's "
                             "SHA-256), but the manifest records neither an input file and site "
                             "config (fluxpart run) nor a demo seed (fluxpart demo), so the "
                             "result cannot be recomputed")
    notes, rounding = list(folder_notes), []
    stopped = interrupted_writes(directory)
    if stopped:
        # a killed `fluxpart run` into this folder leaves the earlier result whole, or, killed
        # between its swap and removing the old result (then in the staging folder), its own
        # result: without this note the verdict read as if the folder surely held that run's
        notes.append(f"{', '.join(stopped)} beside the folder: a fluxpart run into it is "
                     "running now or was stopped before it finished; the folder holds the "
                     "complete result named on the result: line, the earlier one or, if "
                     "that run was stopped just after swapping its result in, its own (the "
                     "next run removes what a stopped one left)")
    if (directory / "report").exists():
        notes.append("report/: the page and its figures are drawn from the tables and are not "
                     "covered by the manifest's hashes, so they are not verified; redraw them "
                     "from the verified tables with `fluxpart report` rather than trusting a "
                     "received page")
        other = _page_of_other_result(directory, manifest)
        if other:
            notes.append(other)
    try:
        # before the rerun is computed: its scratch folder would take this umask, and the
        # whole computation ended in "could not be written ... free space in the
        # temporary folder", a fix that does not help
        require_owner_access()
    except OutputError as error:
        raise OutputError(f"verify: {error}; {str(directory)!r} is unchanged and not judged "
                          "(its rerun is written to a scratch folder, which takes the umask)"
                          ) from None
    remove_dead_scratch()
    same_values: dict = {}      # cause -> tables whose values and metadata equal the rerun's
    worded: dict = {}           # release -> table -> columns worded as before it
    with scratch_folder() as scratch:
        try:
            source, result, input_differences = _recompute(
                directory, manifest, input_path, config_path, scratch, notes,
                # the input values a result holds locate an edited input only where the
                # folder is the one its manifest describes (seal and every SHA-256)
                None if differences else stored_tables.get("timeseries"))
        except FluxpartError as error:
            if not differences:
                # an intact folder without its input: the line asked for --input alone, and
                # an auditor could not tell whether the folder had passed its own check
                # (review58); the check needs no input, so its outcome is named
                error.args = (f"{error} (the folder itself matches its manifest: seal and "
                              "every table's SHA-256; nothing was recomputed)",)
                raise
            # the folder fails its own manifest (seal, a table's SHA-256, a file missing
            # or extra): that verdict needs no input, so a result folder handed on without
            # its input is still found tampered (exit 1), not only asked for --input; nor
            # a manifest whose edited setting the rerun cannot take (despike_z = 50 was a
            # ConfigError, exit 2, naming "[processing]", review round thirteen)
            return VerifyReport(directory=directory, identity=identity, recorded=recorded, source="none",
                                tables=tuple(sorted(stored_tables)),
                                differences=tuple(differences),
                                environment=tuple(environment), code_changed=code_changed,
                                exact=exact, notes=(*notes, "not recomputed: "
                                                     + str(error).removeprefix("verify: ")),
                                replaced_manifest=replaced_manifest(differences, manifest,
                                                                    run_log=run_log))
        if result is None:
            return VerifyReport(directory=directory, identity=identity, recorded=recorded, source=source,
                                tables=tuple(sorted(stored_tables)),
                                differences=tuple(input_differences + differences),
                                environment=tuple(environment), code_changed=code_changed,
                                exact=exact, notes=tuple(notes))
        try:
            # the rerun's recorded paths are never compared (`without_paths`): an input or
            # site config given in a folder named in another code page is written escaped
            # (the scratch manifest could not hold it: "could not be written", exit 2)
            # (_computed=None: the escaped provenance is this rerun's own, not an edit)
            again = dataclasses.replace(
                result, provenance=escaped_paths(result.provenance), _computed=None).write(
                scratch / "recomputed")
        except OutputError as error:
            # a full temporary folder or the file-size limit (ulimit -f): the message named
            # the scratch folder as a "result folder" whose "earlier result" was unchanged
            cause = getattr(error.__context__, "strerror", None) or str(error)
            raise OutputError(f"verify: the rerun could not be written to a scratch folder "
                              f"in {str(scratch.parent)!r} ({cause}); {str(directory)!r} is "
                              "unchanged and not judged: free space in the temporary folder (or point "
                              "TMPDIR at another), or raise the file-size limit (ulimit -f)"
                              ) from None
        new_manifest = _messages_beside(read_manifest(again), result, directory)
        # messages name an input file as the run was given it (relative to the folder it
        # ran in), the rerun by its whole path (review65: a 0.33.0 result of a run in the
        # input's folder was "NOT reproduced" on every warning naming its file)
        new_manifest, respelled = respelled_inputs(manifest, new_manifest)
        if respelled:
            notes.append("warnings: the messages name the input file(s) as the run was "
                         "given them, the rerun by another path ("
                         + "; ".join(f"{shown_name(again_)!r} read as {shown_name(stored_)!r}"
                                     for again_, stored_ in respelled)
                         + "); compared so (each file's content is checked by its SHA-256)")
        moved = notes_moved(manifest, new_manifest)
        if moved:
            notes.append("provenance.reader.notes: the result was written before the reader "
                         "told its notes (a layout understood, every value read as the file "
                         "means it) from its warnings; its warnings hold the notes this code "
                         "records apart, and differ by nothing else")
        # a setting added after the writing release, rerun at its earlier value (a note)
        as_written = {f"config.{added.name}": _text(added.earlier)
                      for added in absent_added_settings(manifest.get("config"))}
        for found in _compare_manifests(manifest, new_manifest):
            if moved and found.column in MOVED_FIELDS:
                continue
            if found.stored == "(absent)" and as_written.get(found.column) == found.recomputed:
                continue
            if found.column in _NAME_FIELDS:
                # a renamed copy of the input: its content is checked by SHA-256
                notes.append(f"{found.column}: the file names differ (stored {found.stored}, "
                             f"now {found.recomputed}); their content is the recorded one")
            elif found.column in _RELEASE_FIELDS:
                notes.append(f"{found.column}: the writing release's statement of how its "
                             "intervals were checked differs from this code's (each release "
                             "states its own benchmarks; it is no number of this result): "
                             f"stored {found.stored}")
            elif found.kind == "rounding":
                rounding.append(found)
            else:
                differences.append(found)
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
            found = compare_tables(name, stored_tables[name], recomputed)
            rounding += [d for d in found if d.kind == "rounding"]
            differences += [d for d in found if d.kind != "rounding"]
            if stored_tables[name].attrs.get("rewritten"):
                notes.append(f"{name}: the rewritten file's values are "
                             + ("bit-identical to the rerun's: only the file and its metadata "
                                "changed" if not found else "not the rerun's where listed"))
                continue
            # metadata are compared beside any value difference and after an edit of the
            # file: an edited unit, or a description edited with a value, was reported only
            # as "changed after it was written" without what changed (review57)
            # a column added, dropped or of another type is named by compare_tables: its
            # schema entries would only repeat it
            described = [] if any(d.kind in ("columns", "dtype") for d in found) else \
                metadata_differences(directory / manifest["tables"][name]["file"],
                                     again / new_manifest["tables"][name]["file"])
            # a description as an earlier release worded it (schema.REWORDED_DESCRIPTIONS)
            # is a note: 0.34.0's folders were NOT reproduced over reworded words alone
            known, described = earlier_wordings(name, described)
            for release, column in known:
                worded.setdefault(release, {}).setdefault(name, []).append(column)
            values = ("" if not found else "values within rounding"
                      if all(d.kind == "rounding" for d in found) else "values differ too")
            differences += [Difference(name, "metadata", column=key, stored=old,
                                       recomputed=new, cause=values)
                            for key, old, new in described]
            if known:
                continue
            if not found and not described and _file_changed(name, differences):
                # a table re-compressed or rewritten by another Parquet writer with its
                # values and metadata: "changed after it was written" alone left an auditor
                # unable to tell whether a number had changed (round faults42)
                notes.append(f"{name}: the changed file's values and metadata are "
                             "bit-identical to the rerun's: only its bytes differ from the "
                             "recorded ones (rewritten with another compression or Parquet "
                             "writer?); the folder still fails, as its file is not the one "
                             "written")
            elif not found and (new_manifest["tables"][name]["sha256"]
                                != manifest["tables"][name].get("sha256")):
                if not described:
                    cause = ("written before tables carried the copy of their metadata that "
                             "pandas.read_parquet reads (PANDAS_ATTRS)"
                             if _lacks_pandas_copy(directory / manifest["tables"][name]["file"])
                             else "library versions differ" if environment else
                             "the recorded library versions and platform match; a compression "
                             "library outside the record may differ")
                    same_values.setdefault(cause, []).append(name)
    notes += earlier_wording_notes(worded, manifest, others=bool(differences or rounding))
    # one note per cause, naming its tables (a result of 0.22.0 gave 14 such lines)
    notes += [f"{', '.join(tables)}: values and metadata bit-identical, file bytes differ from "
              f"the recorded ones ({cause})" for cause, tables in same_values.items()]
    return VerifyReport(directory=directory, identity=identity, recorded=recorded, source=source, tables=tuple(names),
                        differences=tuple(differences), rounding=tuple(rounding),
                        environment=tuple(environment), code_changed=code_changed,
                        exact=exact, notes=tuple(notes),
                        replaced_manifest=replaced_manifest(differences, manifest,
                                                            new_manifest, run_log))


def command_verify(args) -> int:
    """``fluxpart verify DIR [--input FILE] [--config FILE] [--exact] [--quiet] [--detail]
    [--json]``.

    Returns
    -------
    int
        0 when bit-identical or reproduced within floating-point rounding (not
        with ``--exact``), 1 for any other difference or tampering. Errors
        (missing manifest or input) propagate as
        :class:`~fluxpart.errors.FluxpartError`, which the command line prints as
        one line with exit status 2. A batch output folder is verified site by site
        (:mod:`fluxpart.verify_network`).
    """
    from .verify_network import command_verify_network, is_network_folder

    if is_network_folder(args.directory):
        return command_verify_network(args)
    report = verify(args.directory, input_path=getattr(args, "input", None),
                    config_path=getattr(args, "config", None),
                    exact=bool(getattr(args, "exact", False)))
    if getattr(args, "json", False):
        # for an auditor's script: one JSON object, the same exit status
        print(report.as_json())
        return report.exit_code
    quiet = bool(getattr(args, "quiet", False))
    # --quiet wins over --detail: its head line spoke of "entries below" and none followed
    lines = report.format(detail=bool(getattr(args, "detail", False)) and not quiet
                          ).splitlines()
    # --quiet: the verdict and the caution, without the per-column detail
    if quiet:
        identity = [line for line in lines if line.startswith("result: ")]
        changed = report.changes
        headline = lines[0].rstrip(":") + (f" ({'; '.join(changed)})" if changed else "")
        lines = [headline, *identity, *[f"note: {n}" for n in report.kept_notes], lines[-1]]
    print("\n".join(lines))
    return report.exit_code

