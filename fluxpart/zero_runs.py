"""Runs of zero bytes inside a text table, where a logger wrote on after a power cut.

A logger whose power fails while it writes leaves the blocks its file system had already
given the file filled with zero bytes (NUL), from inside the record it was writing; once
the power is back it appends its next records after them. The run of zeros then stands
between a record cut short and a whole record, on one line: ``2021081412302,-1.2\\0\\0...
202108141330,...``. The reader drops the cut record and the zeros and reads on, where the
reading is provable:

- the run ends inside the text (a run closing the file is the reader's zero tail);
- the text before it on its line is a record cut short: not empty, and fewer field
  separators than the whole line above it (zeros at a line start, a record overwritten
  on a damaged card, say nothing of a write cut short and stay refused);
- the text after it, up to the line end, is a whole record (as many of each field
  separator as the line above the cut one) or nothing (the run ended at a line end: the
  line is left blank).

The lines keep their numbers: the record after a run takes the cut record's line.

Anything else (zeros in the header, a run ending inside a record, zeros of a UTF-16 file)
is left to the reader's refusal. Pure functions of the text.

References
----------
Common practice of data loggers on flash cards: file systems allocate whole clusters ahead
of the data, which read as zeros after a power cut (FAT file system behaviour (m)).
"""

import re

#: The characters a text table separates its fields with.
_SEPARATORS = (",", ";", "\t", "|", " ")

_ZERO_RUN = re.compile("\x00+")

#: Characters before a cut line searched for the whole line above it.
_WINDOW = 65536


def _shape(line: str) -> tuple:
    """How many of each field separator `line` holds (blanks around it aside)."""
    line = line.strip()
    return tuple(line.count(separator) for separator in _SEPARATORS)


def without_zero_runs(text: str) -> tuple[str, list] | None:
    """``(text, cut)``: `text` without each run of zero bytes inside it and the cut
    record before the run (`cut`: the cut records' text, one a run, with the line number
    each stood on), where every run is one of the module's; else None.
    """
    out, cut, start = [], [], 0
    for run in _ZERO_RUN.finditer(text):
        if run.end() == len(text):
            return None
        line_start = max(text.rfind("\n", 0, run.start()), text.rfind("\r", 0, run.start())) + 1
        ends = re.compile(r"\r\n|\r|\n").search(text, run.end())
        after = text[run.end():ends.start() if ends else len(text)]
        # the line above, from a window (a line longer than it fails the shape: refused)
        above = text[max(0, line_start - _WINDOW):line_start].rstrip("\r\n").splitlines()
        before = text[line_start:run.start()]
        if line_start < start or not above or "\x00" in above[-1]:
            return None
        whole = _shape(above[-1])
        if not any(whole) or after.strip() and _shape(after) != whole:
            return None
        if not before.strip() or _shape(before) == whole or not all(
                b <= w for b, w in zip(_shape(before), whole, strict=True)):
            return None
        line = len(re.findall(r"\r\n|\r|\n", text[:line_start])) + 1
        out.append(text[start:line_start])
        cut.append((line, before.strip()))
        start = run.end()
    if not cut:
        return None
    out.append(text[start:])
    return "".join(out), cut
