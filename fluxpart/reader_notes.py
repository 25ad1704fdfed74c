"""Reader messages that are notes, not warnings.

A *note* says how the reader understood a file's layout where every value is read as
the file means it (blank lines or a comment mark above the header read past, a header
written again among the records, a footer that holds no record). A *warning* says that a
value was changed, dropped, guessed or may be wrong. ``fluxpart check`` exits 1 on
warnings only: a file read right is no problem to fix (review64). When in doubt a
message stays a warning. The classification of every reader message is the table in
``docs/logger-files.md``.

The reader collects both kinds in one list, passed through its helpers; a note is
marked by its type, :class:`ReaderNote`, and the two are told apart once, where the
:class:`~fluxpart.io.ReadReport` is made.
"""

from __future__ import annotations


class ReaderNote(str):
    """A reader message that is a note: the layout was understood, no value changed."""

    __slots__ = ()


def warnings_of(messages) -> tuple[str, ...]:
    """The messages that are warnings (not :class:`ReaderNote`), in their order."""
    return tuple(str(text) for text in messages if not isinstance(text, ReaderNote))


def notes_of(messages) -> tuple[str, ...]:
    """The messages that are notes (:class:`ReaderNote`), in their order, as plain text."""
    return tuple(str(text) for text in messages if isinstance(text, ReaderNote))


#: The manifest fields that moving the reader's notes out of its warnings changes.
MOVED_FIELDS = ("warnings", "provenance.reader.warnings", "provenance.reader.notes")


def notes_moved(stored: dict, recomputed: dict) -> bool:
    """Whether a result written before the reader told notes from warnings differs from
    its recomputation in :data:`MOVED_FIELDS` only by that move.

    True where the stored reader record has no ``notes``, the recomputed one has some,
    and taking those notes out of the stored reader warnings (and, prefixed ``"input: "``,
    out of the stored run warnings) leaves the recomputed ones, in their order. `verify`
    then names the move as a note instead of three differences (a 0.33.0 folder of a file
    with blank lines above its header was "NOT reproduced" on this alone).

    Parameters
    ----------
    stored, recomputed : dict
        The stored manifest and the manifest of its rerun.

    Returns
    -------
    bool
    """
    stored_reader = stored.get("provenance", {}).get("reader")
    reader = recomputed.get("provenance", {}).get("reader", {})
    notes = reader.get("notes", [])
    if not notes or not isinstance(stored_reader, dict) or "notes" in stored_reader:
        return False
    return (_taken_out(stored_reader.get("warnings"), notes) == reader.get("warnings", [])
            and _taken_out(stored.get("warnings"), [f"input: {note}" for note in notes])
            == recomputed.get("warnings", []))


def _taken_out(messages, removed: list) -> list | None:
    """`messages` without each of `removed` once, in their order; None where one of
    `removed` is not among them (or `messages` is no list)."""
    if not isinstance(messages, list):
        return None
    left, kept = list(removed), []
    for text in messages:
        if text in left:
            left.remove(text)
        else:
            kept.append(text)
    return None if left else kept
