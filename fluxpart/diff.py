"""``fluxpart diff A B``: what differs between two result folders, and what it did to the budget.

An auditor handed an operator's rerun that gives another budget needs to see
why: another input file, another setting, other library versions, changed code,
another machine. :func:`diff_folders` reads both folders (each must match its
own manifest, see :func:`fluxpart.resultdir.read_folder`) and lists

- the SHA-256 of the input file(s) and of the site config;
- each setting, the site, the seed, the reader's record and the warnings that differ;
- the model choices the night data made (respiration temperature, delay, form weight);
- each library version, the code fingerprint and the platform facts (CPU features,
  BLAS, machine) that differ, listed apart: facts of the run, not of the result, as
  ``verify`` treats them (platform since leftovers51, versions and code since
  leftovers52); so are the inputs' SHA-256 (the bytes handed over: a tar archive and
  the table unpacked from it hold the same records) and the reader's notes (how a
  layout was understood; notes recorded apart from the warnings by a later release),
  since leftovers55;
- the tables whose bytes differ, and whether their values or only their metadata do;
- how each annual number moved: its unit, both values, the change (second minus first)
  and the change relative to the first value's magnitude.

Exit statuses of the command: 0 when the two folders hold the same result under
the same settings (paths, the run log and report pages do not count), also where the only differences of the result are tables whose values are
equal within floating-point rounding as ``verify`` judges it (their hashes listed;
since leftovers50), whatever facts of the run differ (the inputs' SHA-256, the reader's notes, library
versions, code fingerprint, platform: verify lists them and fails none by itself;
platform since leftovers51, versions and code since leftovers52, inputs and notes
since leftovers55: the tables are the verdict), 1 when anything else listed
differs, 2 on error (a folder that is missing, not a result
folder, or does not match its manifest).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .config import implied_settings
from .fingerprint import platform_differences
from .manifest import CAUTION, shown_path
from .reader_notes import notes_moved

__all__ = ["DiffReport", "command_diff", "diff_folders", "table_difference"]

_SECTIONS = (("site", "site"), ("config", "setting"), ("seed", "seed"),
             ("warnings", "warnings"), ("caution", "caution"), ("format", "format"))
# provenance records of the choices the night data make, and the fields compared
_MODEL_CHOICES = (("respiration_driver", ("chosen", "delay_hours", "delay_daily_amplitude")),
                  ("respiration_form", ("exponential_weight", "share_applied")),
                  ("light_shape", ("profiled_curvature",)))
#: Sections of :attr:`DiffReport.items` that are facts of the run, not of the result:
#: listed apart and no difference of the result by themselves, as ``verify`` lists them
#: ("Differences of library versions, of the product's code ... and of the platform are
#: listed and are not failures by themselves"): the platform since leftovers51, library
#: versions and the code fingerprint since leftovers52 (tables byte-identical beside
#: another numpy release made diff exit 1 where verify exits 0).
#: The inputs' SHA-256 and the reader's notes since leftovers55: a result run from a tar
#: archive and one from the table unpacked from it, every table byte-identical, made
#: diff exit 1 on the input's hash, and a note that a later release records apart from
#: the warnings (readernotes51) on three fields: the bytes handed over and how their
#: layout was read are facts of the run; the tables hold its result.
RUN_FACTS = ("input", "reading", "version", "code", "platform")
#: How each section of :data:`RUN_FACTS` is named in a sentence.
_RUN_FACT_NAMES = {"input": "the inputs' bytes", "reading": "the reader's notes",
                   "version": "library versions", "code": "the code",
                   "platform": "the platform"}
#: The heading each section of :data:`RUN_FACTS` but the platform is listed under.
_RUN_FACT_HEADINGS = (
    (("input",), "inputs (facts of the run, not of the result: the tables compare what "
                 "was read):"),
    (("reading",), "reading (facts of the run, not of the result):"),
    (("version", "code"), "versions and code (facts of the run, not of the result):"))
#: Items of a reader's note recorded among the warnings by a release before
#: readernotes51 and apart by a later one (:func:`fluxpart.reader_notes.notes_moved`).
_MOVED_ITEMS = (("warnings", "warnings"), ("reader", "warnings"), ("reading", "notes"))
#: How a table whose values differ within rounding only ends its label
#: (:func:`table_difference`, :attr:`DiffReport.within_rounding`).
_ROUNDING_SUFFIX = ", metadata equal"
#: Longest label that sets the column the values start in [characters]; a longer one is
#: wrapped on lines of its own (:func:`_item_lines`).
LABEL_WIDTH = 40
#: Indent of the values listed on lines of their own under a long label [characters]:
#: past the label's own continuation lines (4), the same whatever else is listed.
VALUE_INDENT = 6
#: Width the lines of a long label and its values are wrapped to [characters]: a
#: terminal's common default (common practice).
TERMINAL_COLUMNS = 80


@dataclass(frozen=True)
class DiffReport:
    """The outcome of :func:`diff_folders`.

    Attributes
    ----------
    first, second : pathlib.Path
        The two folders.
    items : tuple of (str, str, str, str)
        ``(section, name, first value, second value)`` for everything that differs
        apart from the annual numbers; sections are ``"input"``, ``"setting"``,
        ``"site"``, ``"seed"``, ``"reader"``, ``"warnings"``, ``"caution"``,
        ``"format"``, ``"model"`` (the respiration temperature, its delay and the
        respiration form's weight the night data chose; since 0.17.0), ``"reading"``
        (the reader's notes; since leftovers55), ``"version"``, ``"code"``,
        ``"platform"`` and ``"table"``.
    annual : pandas.DataFrame
        One row per (year, column) of ``annual`` whose value differs: ``unit`` (the
        column's unit as people read it: ``g C m-2``, ``t CO2 ha-1``, ``m s-1``, ``1``
        for a share or count, ``""`` for a date or label; since review63), ``first``,
        ``second``, ``change`` (second - first, in the column's unit) and
        ``relative`` (change / |first|; NaN when first is 0 or missing). Both are NaN
        for a year whose row covers another period in each folder (``period_start`` or
        ``period_end`` differ; since review39).
    same_annual : int
        Annual values that are equal in both folders.
    rounding_annual : tuple of (year, str)
        Annual values that differ within floating-point rounding only, as ``verify``
        judges it (:data:`fluxpart.verify.ROUNDING_TOLERANCE`): not listed as moves
        (since polish49).
    """

    first: Path
    second: Path
    items: tuple = ()
    annual: pd.DataFrame = field(default_factory=pd.DataFrame)
    same_annual: int = 0
    rounding_annual: tuple = ()

    @property
    def same(self) -> bool:
        """True when nothing differs, the platform included."""
        return not self.items and self.annual.empty

    @property
    def result_items(self) -> tuple:
        """The differing items that are facts of the result: all but :data:`RUN_FACTS`'."""
        return tuple(item for item in self.items if item[0] not in RUN_FACTS)

    @property
    def run_facts(self) -> tuple:
        """The differing items that are facts of the run, not of the result (the inputs'
        SHA-256, the reader's notes, library versions, code fingerprint, platform:
        :data:`RUN_FACTS`), as ``verify`` treats them."""
        return tuple(item for item in self.items if item[0] in RUN_FACTS)

    @property
    def platform_facts(self) -> tuple:
        """The platform facts that differ (CPU features, BLAS and its architecture,
        machine)."""
        return tuple(name for section, name, _, _ in self.items if section == "platform")

    @property
    def same_result(self) -> bool:
        """True when nothing but facts of the run differs: every table bit for bit equal."""
        return not self.result_items and self.annual.empty

    @property
    def within_rounding(self) -> bool:
        """True when the only differences of the result are tables whose values are equal
        within rounding (:func:`table_difference`), and no annual value moves beyond it
        (facts of the run may differ too: another CPU or library release is the expected
        cause)."""
        return (bool(self.result_items) and self.annual.empty
                and all(section == "table" and name.endswith(_ROUNDING_SUFFIX)
                        for section, name, _, _ in self.result_items))

    @property
    def exit_code(self) -> int:
        """0 when the result is the same or equal within rounding, whatever facts of the
        run (inputs' bytes, reader's notes, versions, code, platform) differ; 1 when
        anything else differs: the verdicts ``verify`` gives such a rerun (exit 0;
        leftovers51: a platform fact made diff exit 1, leftovers52: a library version or
        the code fingerprint did, leftovers55: an input's SHA-256 or a moved note did)."""
        return 0 if self.same_result or self.within_rounding else 1

    def format(self) -> str:
        """The report as text for the command line."""
        lines = [f"fluxpart diff: {shown_path(self.first)} (first) vs "
                 f"{shown_path(self.second)} (second)"]
        facts = self.run_facts
        named, verb = _run_fact_subject(facts)
        equal = "settings, site" if any(item[0] == "input" for item in facts) \
            else "input, settings, site"
        if self.same_result:
            if facts:
                lines.append(f"same result: {equal}, every table (bit for bit) "
                             f"and all {self.same_annual} annual values are equal; only "
                             f"{named} {verb} ({len(facts)} fact(s) of the run, listed "
                             "below)")
            else:
                lines.append(f"same: input, settings, site, versions, code, platform and all "
                             f"{self.same_annual} annual values are equal")
            if self.rounding_annual:
                lines.append(_rounding_line(self.rounding_annual))
            lines.extend(_run_fact_lines(facts))
        else:
            items = self.result_items
            if self.within_rounding:
                from .verify import ROUNDING_TOLERANCE

                # an auditor's rerun on another CPU or release: verify's exit 0, not "differ"
                where = (f"; {named} {verb} (listed below)" if facts
                         else "; versions, code and platform are equal")
                lines.append(
                    f"equal within rounding: {equal.replace(', site', ' and site')} are "
                    f"equal{where}; "
                    f"{len(items)} table(s) differ in bytes, their values only within "
                    f"rounding (relative difference at most {ROUNDING_TOLERANCE:g}, as "
                    "verify judges it; hashes below)")
            else:
                also = (f"; {named} {verb} in {len(facts)} fact(s) of the run, listed apart"
                        if facts else "")
                lines.append(f"differ: {len(items)} recorded item(s) and "
                             f"{len(self.annual)} annual value(s){also}")
            names = [(a, b) for s, n, a, b in self.items if (s, n) == ("site", "name")]
            if names:
                # two towers: the moves below are no rerun's, whatever their size
                lines.append(f"note: the folders hold two sites (first {names[0][0]}, second "
                             f"{names[0][1]}): the annual values below compare two sites, "
                             "not a result and its rerun")
            # a field that is its own section (warnings, seed, caution, format) is named
            # once: "warnings warnings" read as a typo (review25)
            labels = [name if name == section else f"{section} {name}"
                      for section, name, _, _ in items]
            # a long label (a table's metadata named) does not widen the others' column
            width = max((len(label) for label in labels if len(label) <= LABEL_WIDTH),
                        default=0)
            for label, (_, _, a, b) in zip(labels, items, strict=True):
                lines.extend(_item_lines(label, a, b, width))
            lines.extend(_run_fact_lines(facts))
            if not self.annual.empty:
                other = _years_of_other_periods(self.annual)
                if other:
                    lines.append(f"note: year(s) {', '.join(str(y) for y in other)} cover "
                                 "other periods in the two folders (period_start / "
                                 "period_end differ: another [processing] year_start): "
                                 "their values are listed, not differenced")
                lines.append("How the annual numbers moved (in each column's unit; change = "
                             "second - first; relative = change / |first|, 0.01 = 1 %; "
                             "NEE < 0 is net uptake):")
                shown = self.annual.copy()
                # a year one folder lacks is "-" in every column: pandas prints an absent
                # date or flag as "None" or "NaT" (review54), a number as na_rep
                for column in ("first", "second"):
                    if shown[column].dtype == object:
                        shown[column] = shown[column].map(_absent_as_dash)
                lines.append(shown.to_string(float_format=lambda v: f"{v:.6g}", na_rep="-"))
            lines.append(f"annual values equal in both: {self.same_annual}")
            if self.rounding_annual:
                lines.append(_rounding_line(self.rounding_annual))
        lines.append(f"Caution: {CAUTION}")
        return "\n".join(lines)


def _run_fact_subject(facts) -> tuple:
    """The facts of the run that differ named for a sentence, and its verb:
    ``("the platform", "differs")``, ``("library versions and the code", "differ")``."""
    names = [_input_subject(facts) if section == "input" else _RUN_FACT_NAMES[section]
             for section in RUN_FACTS if any(item[0] == section for item in facts)]
    if len(names) <= 1:
        subject = names[0] if names else ""
        return subject, ("differs" if subject in ("the code", "the platform", "the demo record")
                         else "differ")
    return f"{', '.join(names[:-1])} and {names[-1]}", "differ"


def _input_subject(facts) -> str:
    """The input facts that differ named for a sentence: ``"the site config's bytes"``
    where only its SHA-256 differs, ``"the inputs' bytes"`` where the input file's does
    too (review75: "the inputs' bytes differ" sent the reader to the input file when only
    the site config had been edited)."""
    files = [name.removesuffix(" SHA-256") for section, name, _, _ in facts
             if section == "input" and name.endswith(" SHA-256")]
    named = ([_RUN_FACT_NAMES["input"]] if len(files) > 1 else
             [f"the {files[0]}'s bytes"] if files else [])
    if any(item[:2] == ("input", "demo record") for item in facts):
        named.append("the demo record")
    return " and ".join(named)


def _run_fact_lines(facts) -> list:
    """The facts of the run that differ, under headings that say what they are: the
    inputs' SHA-256, the reader's notes, library versions and the code fingerprint with
    both values, the platform's by name."""
    lines = []
    for sections, heading in _RUN_FACT_HEADINGS:
        recorded = [item for item in facts if item[0] in sections]
        if not recorded:
            continue
        labels = [name if section in ("input", "reading") else f"{section} {name}"
                  for section, name, _, _ in recorded]
        width = max((len(label) for label in labels if len(label) <= LABEL_WIDTH), default=0)
        lines.append(heading)
        for label, (_, _, a, b) in zip(labels, recorded, strict=True):
            lines.extend(_item_lines(label, a, b, width))
    platform = [name for section, name, _, _ in facts if section == "platform"]
    if platform:
        lines += (["platform (facts of the run, not of the result):"]
                  + [f"  {fact}" for fact in platform])
    return lines


def _rounding_line(cells) -> str:
    """The line naming the annual values equal within rounding: their count and cells."""
    from .verify import ROUNDING_TOLERANCE

    named = ", ".join(f"{year} {column}" for year, column in cells[:5])
    more = f" and {len(cells) - 5} more" if len(cells) > 5 else ""
    return (f"annual values equal within rounding (relative difference at most "
            f"{ROUNDING_TOLERANCE:g}, as verify judges it): {len(cells)} ({named}{more})")


def _item_lines(label: str, first: str, second: str, width: int) -> list:
    """The lines of one differing item: its label padded to `width` and both values.

    A label longer than `width` (over :data:`LABEL_WIDTH` characters: a table's
    metadata named) is wrapped on lines of its own and its values follow on the next
    lines, indented by :data:`VALUE_INDENT` whatever else is listed, each wrapped to
    :data:`TERMINAL_COLUMNS` (leftovers49: such a label pushed its values out of the
    column; leftovers51: they started in the other items' column, so a table's hashes
    were indented by 4 or by 30 depending on what else differed). A word is never broken (polish49): a SHA-256 or a path split over two
    lines had to be joined by an auditor comparing or copying it; a word longer than
    the width runs past it on a line of its own.
    """
    import textwrap

    if len(label) <= width:
        return [f"  {label:<{width}}  first {first}  second {second}"]
    lines = textwrap.wrap(label, TERMINAL_COLUMNS, initial_indent="  ",
                          subsequent_indent="    ", break_on_hyphens=False,
                          break_long_words=False)
    indent = " " * VALUE_INDENT
    for name, value in (("first", first), ("second", second)):
        lines += textwrap.wrap(f"{name} {value}", TERMINAL_COLUMNS, initial_indent=indent,
                               subsequent_indent=indent + " " * (len(name) + 1),
                               break_on_hyphens=False, break_long_words=False
                               ) or [f"{indent}{name}"]
    return lines


def _years_of_other_periods(annual: pd.DataFrame) -> list:
    """Years of a moves table whose period_start or period_end differ between the folders."""
    out = []
    for year, column in annual.index:
        if column in ("period_start", "period_end") and year not in out:
            a, b = annual.at[(year, column), "first"], annual.at[(year, column), "second"]
            if a is not None and b is not None and pd.notna(a) and pd.notna(b):
                out.append(year)
    return out


#: Characters a differing value is shown in (a setting, a warnings list) [characters].
SHOWN_CHARACTERS = 120
#: Characters kept before the first differing one where a long common start is cut
#: [characters].
SHOWN_CONTEXT = 30


def _text(value) -> str:
    import json

    if value is None:
        return "none"           # JSON's "null" and an empty list "[]" read as code (review46)
    # "±" and "°C" as written, not "\u00b1" (review63): verify shows them so too
    return value if isinstance(value, str) else json.dumps(value, sort_keys=True, default=str,
                                                           ensure_ascii=False)


def _shown_pair(first, second) -> tuple[str, str]:
    """Two differing values as text, cut where they differ
    (:func:`fluxpart.verify.cut_where_they_differ`): two long texts alike in their
    first 117 characters (two runs' warnings differing in a later count) were shown as
    two equal cut texts under "differ" (review63)."""
    from .verify import cut_where_they_differ

    return cut_where_they_differ(_text(first), _text(second), width=SHOWN_CHARACTERS,
                                 context=SHOWN_CONTEXT)


#: What follows a setting's value that its folder's record does not name.
_IMPLIED = " (implied, not recorded)"


def _with_implied(config) -> tuple:
    """A recorded ``config`` mapping with each setting it does not name at the value that
    computed its result (:func:`fluxpart.config.implied_settings`), and those names."""
    implied = implied_settings(config)
    if not implied:
        return config, {}
    # no events is shown "none", not "[]" (read as code, review46)
    return {**config, **{name: None if value == () else value
                         for name, (value, _) in implied.items()}}, implied


def _entries(provenance: dict, key: str) -> list:
    entries = provenance.get(key)
    return entries if isinstance(entries, list) else [entries] if entries else []


def _recorded_items(first: dict, second: dict) -> list:
    from .verify import field_differences

    items = []
    a_prov, b_prov = first.get("provenance") or {}, second.get("provenance") or {}
    for key, label in (("input", "input file"), ("site_config", "site config")):
        a = [e.get("sha256") for e in _entries(a_prov, key) if isinstance(e, dict)]
        b = [e.get("sha256") for e in _entries(b_prov, key) if isinstance(e, dict)]
        if a != b:
            items.append(("input", f"{label} SHA-256",
                          *_shown_pair(a[0] if len(a) == 1 else a or None,
                                       b[0] if len(b) == 1 else b or None)))
    if a_prov.get("demo") != b_prov.get("demo"):
        items.append(("input", "demo record", *_shown_pair(a_prov.get("demo"),
                                                           b_prov.get("demo"))))
    for key, section in _SECTIONS:
        if key == "seed" and all(isinstance(m.get("config"), dict)
                                 and m["config"].get("seed") == m.get("seed")
                                 for m in (first, second)):
            continue        # the same seed as the setting's, listed there once
        a_value, b_value = first.get(key), second.get(key)
        a_implied = b_implied = {}
        if key == "config":
            # a setting a folder's record does not name, at the value that computed it
            # (added after its release, or recorded only away from its default;
            # leftovers55: "(absent)" against "none" for a 0.33.0 folder's
            # night_donor_margin, which computed as "none")
            a_value, a_implied = _with_implied(a_value)
            b_value, b_implied = _with_implied(b_value)
        for name, a, b in field_differences(a_value, b_value, ""):
            a_text, b_text = _shown_pair(a, b)
            items.append((section, name or key, a_text + _IMPLIED * (name in a_implied),
                          b_text + _IMPLIED * (name in b_implied)))
    for name, a, b in field_differences(a_prov.get("reader"), b_prov.get("reader"), ""):
        # a note tells how a layout was read, every value as the file means it: a fact
        # of reading (leftovers55), compared as the warnings are otherwise
        items.append(("reading" if name == "notes" else "reader", name or "record",
                      *_shown_pair(a, b)))
    for name, a, b in field_differences(a_prov.get("screening"), b_prov.get("screening"), ""):
        items.append(("reader", f"screening {name}".strip(), *_shown_pair(a, b)))
    # the model choices the data made: a rerun on other data (or other code) can choose
    # another respiration temperature, delay or form, which moves the partitioned sums
    for key, fields in _MODEL_CHOICES:
        a_choice, b_choice = a_prov.get(key) or {}, b_prov.get(key) or {}
        for name in fields:
            if isinstance(a_choice, dict) and isinstance(b_choice, dict) \
                    and a_choice.get(name) != b_choice.get(name):
                items.append(("model", f"{key} {name}",
                              *_shown_pair(a_choice.get(name), b_choice.get(name))))
    for name, a, b in field_differences(first.get("versions"), second.get("versions"), ""):
        items.append(("version", name, *_shown_pair(a, b)))
    a_code, b_code = first.get("code") or {}, second.get("code") or {}
    for key in ("version", "sha256"):
        if a_code.get(key) != b_code.get(key):
            items.append(("code", "fingerprint" if key == "sha256" else "version",
                          *_shown_pair(a_code.get(key), b_code.get(key))))
    for phrase in platform_differences(first.get("platform"), second.get("platform")):
        items.append(("platform", phrase, "", ""))
    a_tables, b_tables = first.get("tables") or {}, second.get("tables") or {}
    for name in sorted(set(a_tables) | set(b_tables)):
        a = (a_tables.get(name) or {}).get("sha256", "(absent)")
        b = (b_tables.get(name) or {}).get("sha256", "(absent)")
        if a != b:
            items.append(("table", f"{name} bytes", a[:16], b[:16]))
    return items


def table_difference(first: pd.DataFrame, second: pd.DataFrame) -> str:
    """What differs between two tables of one name whose files' bytes differ.

    A table written by another release can hold the same values with other metadata (a
    column's description reworded, a unit written another way): "table monthly bytes
    differ" read as changed numbers to an auditor comparing a 0.30.0 folder with a
    rerun (round faults37). The values (index, columns, dtypes and every cell, NaN equal
    to NaN: :meth:`pandas.DataFrame.equals`) are compared first, then the metadata the
    reader restores (``attrs``: units, descriptions and the table's other facts).

    Parameters
    ----------
    first, second : pandas.DataFrame
        The table as :func:`fluxpart.store.read_table` reads it from each folder.

    Returns
    -------
    str
        ``"values"`` where a value, a column or the index differs beyond rounding;
        ``"values within rounding (largest relative difference X), metadata equal"``
        where every differing value is a float within rounding as ``verify`` judges it
        (:func:`fluxpart.verify.compare_tables`; leftovers50: "values" before, which
        read as changed numbers), with the metadata that differ instead of "metadata
        equal" where any do; else ``"metadata only (values equal): <key> of
        <columns>; ..."``; else ``"file only (values and metadata equal)"`` (the
        Parquet writer's own bytes).

    References
    ----------
    pandas documentation, ``DataFrame.equals`` (same shape, dtypes and elements, NaN in
    the same places equal) (m).
    """
    if not (list(first.columns) == list(second.columns)
            and first.index.names == second.index.names):
        return "values"
    parts = []
    if not first.equals(second):
        from .verify import compare_tables

        found = compare_tables("table", first, second)
        if not found or any(d.kind != "rounding" for d in found):
            return "values"
        parts.append(f"values within rounding (largest relative difference "
                     f"{max(d.relative for d in found):.3g})")
    values = len(parts)
    for key in sorted(set(first.attrs) | set(second.attrs), key=str):
        a, b = first.attrs.get(key), second.attrs.get(key)
        if a == b:
            continue
        if isinstance(a, dict) and isinstance(b, dict):
            columns = sorted((c for c in set(a) | set(b) if a.get(c) != b.get(c)), key=str)
            parts.append(f"{key} of {', '.join(map(str, columns))}")
        else:
            parts.append(str(key))
    if values and len(parts) == 1:
        return parts[0] + _ROUNDING_SUFFIX
    if values:
        return f"{parts[0]}, metadata: {'; '.join(parts[1:])}"
    if parts:
        return f"metadata only (values equal): {'; '.join(parts)}"
    return "file only (values and metadata equal)"


def _named_table_differences(items: list, first: dict, second: dict) -> list:
    """`items` with each table whose bytes differ named by what differs
    (:func:`table_difference`) where both folders hold it."""
    out = []
    for section, name, a, b in items:
        table = name.removesuffix(" bytes")
        if section == "table" and table in first and table in second:
            out.append((section, f"{table} {table_difference(first[table], second[table])}",
                        a, b))
        else:
            out.append((section, name, a, b))
    return out


def _other_periods(first: pd.DataFrame, second: pd.DataFrame) -> set:
    """Years whose row covers another period in each table (``period_start`` or
    ``period_end`` differ: another ``year_start``): their sums are not of one period."""
    out = set()
    for year in first.index.intersection(second.index):
        for column in ("period_start", "period_end"):
            if column in first.columns and column in second.columns:
                a, b = first.at[year, column], second.at[year, column]
                if pd.notna(a) and pd.notna(b) and pd.Timestamp(a) != pd.Timestamp(b):
                    out.add(year)
    return out


def _absent_as_dash(value):
    """A value of the moves table as printed: "-" where it is absent (None, NaT, NaN)."""
    return "-" if value is None or (np.ndim(value) == 0 and pd.isna(value)) else value


def _rounding_cells(first: pd.DataFrame, second: pd.DataFrame, other: set) -> set:
    """(year, column) cells of two annual tables equal within floating-point rounding,
    judged as ``verify`` judges it (:func:`fluxpart.verify.within_rounding`), in the years
    both hold over the same period.

    A year is one row, so verify's near-zero rule (a value near zero judged relative to a
    share of its column's largest magnitude) had no column to speak of: a part that is
    zero in one folder and a float residue (9.46e-23 g C m-2) in the other was a move of
    -100 %. The values of one unit in one year are computed from the same records, so the
    year's largest magnitude in that unit that both folders share stands in for the column
    (:func:`_unit_scale`; round faults46, review75).
    """
    from .verify import within_rounding

    years = [y for y in first.index.intersection(second.index) if y not in other]
    if not years:
        return set()
    a, b = first.loc[years], second.loc[years]
    scales = _unit_scale(a, b)
    return {(year, column) for column in a.columns if column in b.columns
            for year, rounding in zip(years, within_rounding(column, a, b, scales.get(column)),
                                      strict=True)
            if rounding}


def _unit_scale(first: pd.DataFrame, second: pd.DataFrame) -> dict:
    """Per float column with a unit, the largest magnitude per row that both tables share
    among the float columns of the same unit: per column the smaller of its two
    magnitudes, then the largest of these (NaN and infinities count as 0).

    The smaller of the two: a value that blew up in one folder only (a fit gone astray,
    1.4e12 g C m-2) made the larger one the scale, and a real move of another column
    (NEE -240.6 to -190.6) read as "equal within rounding" (review75).
    """
    units = {**(second.attrs.get("units") or {}), **(first.attrs.get("units") or {})}
    groups = {}
    for column in first.columns.intersection(second.columns):
        if units.get(column) and all(pd.api.types.is_float_dtype(frame[column].dtype)
                                     for frame in (first, second)):
            groups.setdefault(units[column], []).append(column)
    scales = {}
    for columns in groups.values():
        values = np.abs(np.stack([frame[columns].to_numpy(dtype=np.float64)
                                  for frame in (first, second)]))
        values[~np.isfinite(values)] = 0.0
        scales.update(dict.fromkeys(columns, values.min(axis=0).max(axis=1)))
    return scales


def _annual_moves(first: pd.DataFrame, second: pd.DataFrame) -> tuple[pd.DataFrame, int, list]:
    from .units import display_unit

    # each move beside its unit: "-0.273" of nee (g C m-2) beside "0.0118" of the u*
    # threshold (m s-1) and "-0.009" of a share (1) read as one scale (review63)
    units = {**(second.attrs.get("units") or {}), **(first.attrs.get("units") or {})}
    rows, same = [], 0
    years = first.index.union(second.index)
    columns = list(first.columns) + [c for c in second.columns if c not in first.columns]
    # a year label over two periods (calendar 2013 and the budget year from 1 July 2013)
    # is listed with both values but not differenced: "nee moved by -138 (-130 %)" read
    # as the setting's effect on one year (review39)
    other = _other_periods(first, second)
    # float noise (a spread changed by 4.5e-13 between two runs of other settings) is no
    # move: equal within the tolerance verify names rounding (review55)
    noise = _rounding_cells(first, second, other)
    rounding = []
    for year in years:
        for column in columns:
            a = first.at[year, column] if year in first.index and column in first.columns \
                else None
            b = second.at[year, column] if year in second.index and column in second.columns \
                else None
            numeric = all(v is None or isinstance(v, (int, float, np.integer, np.floating))
                          and not isinstance(v, (bool, np.bool_)) for v in (a, b))
            if numeric:
                fa = np.nan if a is None else float(a)
                fb = np.nan if b is None else float(b)
                equal = (np.isnan(fa) and np.isnan(fb)) or fa == fb
                if equal and a is not None and b is not None:
                    same += 1
                    continue
                if (year, column) in noise:
                    rounding.append((year, column))
                    continue
                change = fb - fa if year not in other else np.nan
                relative = (change / abs(fa) if np.isfinite(fa) and fa != 0 and np.isfinite(change)
                            else np.nan)
                rows.append({"year": year, "column": column,
                             "unit": display_unit(units.get(column, "")), "first": fa,
                             "second": fb, "change": change, "relative": relative})
            else:
                if a is not None and b is not None and (a == b or (pd.isna(a) and pd.isna(b))):
                    same += 1
                    continue
                rows.append({"year": year, "column": column,
                             "unit": display_unit(units.get(column, "")), "first": a,
                             "second": b, "change": np.nan, "relative": np.nan})
    table = pd.DataFrame(rows, columns=["year", "column", "unit", "first", "second", "change",
                                        "relative"])
    return table.set_index(["year", "column"]), same, rounding


def _notes_apart(items: list, first: dict, second: dict) -> list:
    """`items` with the differences of a reader's note moved out of the warnings by a
    later release (:func:`fluxpart.reader_notes.notes_moved`, either folder the earlier)
    as one fact of reading, as ``verify`` names such a move in a note.

    A result written before readernotes51 holds a note ("2 blank line(s) above the
    header read past") among its run's and reader's warnings; a later one records it
    apart. That is no other result: the note is how the file's layout was read, and
    every value was read as the file means it.
    """
    older = ("first" if notes_moved(first, second)
             else "second" if notes_moved(second, first) else None)
    if older is None:
        return items
    notes = (second if older == "first" else first)["provenance"]["reader"]["notes"]
    told = f"{len(notes)} apart from the warnings"
    among = f"{len(notes)} among the warnings (written before notes were told apart)"
    kept = [item for item in items if item[:2] not in _MOVED_ITEMS]
    return [*kept, ("reading", "notes moved", *((among, told) if older == "first"
                                                 else (told, among)))]


def diff_folders(first, second) -> DiffReport:
    """Compare two result folders.

    Parameters
    ----------
    first, second : path-like
        Result folders; each must match its own manifest.

    Returns
    -------
    DiffReport

    Raises
    ------
    InputFileError
        If a folder is not a result folder or does not match its manifest.
    """
    from .resultdir import read_folder

    first, second = Path(first), Path(second)
    a_manifest, a_tables = read_folder(first)
    b_manifest, b_tables = read_folder(second)
    from .verify import respelled_inputs

    # a message naming an input by another path (0.33.0 wrote it as the run was given
    # it, 0.34.0 relative to the result folder: leftovers54) is compared as the first
    # folder spells it, as verify does (review65); the spellings are a fact of reading
    b_compared, respelled = respelled_inputs(a_manifest, b_manifest)
    items = _notes_apart(_recorded_items(a_manifest, b_compared), a_manifest, b_compared)
    items += [("reading", "input named in messages", shown_path(stored), shown_path(path))
              for path, stored in respelled]
    items = _named_table_differences(items, a_tables, b_tables)
    annual, same, rounding = _annual_moves(a_tables["annual"], b_tables["annual"])
    return DiffReport(first=first, second=second, items=tuple(items), annual=annual,
                      same_annual=same, rounding_annual=tuple(rounding))


def command_diff(args) -> int:
    """``fluxpart diff A B``: 0 when the same result or equal within rounding (facts of
    the run: inputs' bytes, reader's notes, versions, code, platform aside), 1 when
    anything else differs (errors exit 2)."""
    report = diff_folders(args.first, args.second)
    print(report.format())
    return report.exit_code
