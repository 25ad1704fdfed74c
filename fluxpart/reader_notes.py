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
