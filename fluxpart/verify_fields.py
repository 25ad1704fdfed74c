"""Comparing a result's manifest with its rerun's, field by field, for :func:`fluxpart.verify.verify`.

Every field that does not depend on where the files lie (site, settings, seed, warnings,
caution, the provenance without its paths, the table list) is compared
(:func:`_compare_manifests`); a number the run computed (``provenance``) may differ within
:data:`fluxpart.verify_compare.ROUNDING_TOLERANCE`. Messages that name an input file are
compared as the run was given the file (:func:`respelled_inputs`) and as written beside the
verified folder, not the scratch folder (:func:`_messages_beside`). Long differing values are
cut where they differ (:func:`cut_where_they_differ`, shared with ``diff``).
"""

from __future__ import annotations

import json
import os
import re
from pathlib import Path

import numpy as np

from .config import absent_added_settings
from .manifest import (
    QUOTED_TEXT,
    escaped_paths,
    path_entries,
    portable_messages,
    without_paths,
)
from .reader_notes import MOVED_FIELDS
from .verify_compare import ROUNDING_TOLERANCE, Difference, field_differences

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


def rerun_field_findings(manifest: dict, new_manifest: dict, moved: bool) -> tuple[list, list, list]:
    """Every manifest field of a rerun against the stored one, sorted into what differs,
    what differs within rounding and what is only a note.

    A field the writing release's reader notes moved (:data:`fluxpart.reader_notes.
    MOVED_FIELDS`, where `moved`) or a setting added after the writing release and rerun
    at its earlier value (:func:`fluxpart.config.absent_added_settings`) is passed over;
    the input files' names (:data:`_NAME_FIELDS`: their content is checked by SHA-256) and
    the writing release's statement of its benchmarks (:data:`_RELEASE_FIELDS`) are notes.

    Parameters
    ----------
    manifest, new_manifest : dict
        The folder's manifest and its rerun's (messages as the folder's writer recorded
        them: :func:`_messages_beside`, :func:`respelled_inputs`).
    moved : bool
        Whether the stored warnings hold the reader's notes the rerun records apart
        (:func:`fluxpart.reader_notes.notes_moved`).

    Returns
    -------
    (list, list, list)
        The differences, the rounding differences (each a :class:`Difference`) and the
        notes (str), each in the order of :func:`_compare_manifests`.
    """
    differences, rounding, notes = [], [], []
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
    return differences, rounding, notes
