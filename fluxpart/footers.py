"""Lines under a file's records that summarise them: a footer of words, statistics rows.

A logger program or a data portal may close a file with a few lines about it after a
blank line ("Records written,17520", "End of data"), and a table saved from a
spreadsheet may keep the statistics of each column under the records ("mean,...",
"max,..."). Neither is a record (a footer line may name a date, "Written 2021-06-11",
but it opens with a word and holds no time of day; a statistics row has a word where
the records have their stamp). They are dropped with a reader note quoting them
(layouts38; refused before, naming them), with a warning where values stand under a
stamp word that names no statistic (:func:`dropped_rows_hold_no_record`); a block that
may be records is refused as before.
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .timestamps import NULL_STAMP

#: a cell that opens with a letter: a word, no date, time, number or code
_OPENS_WITH_WORD = re.compile(r"\s*\"?[^\W\d_]")
#: the word a line opens with, up to a delimiter, blank or quote
_OPENING_WORD = re.compile(r"\s*\"?([^\W\d_][^\s,;|\"]*)")
#: a time of day (hh:mm), which a record's stamp holds and a note about the file rarely
_CLOCK = re.compile(r"(?<!\d)\d{1,2}:\d{2}(?!\d)")
#: a stamp cell holding a word and no digit ("mean", "Total", "Std. dev."): no stamp
_WORD_STAMP = re.compile(r"[^\W\d_][^\d]*")


def word_footer(text_lines: list, lines: np.ndarray, short: list, last: int) -> list:
    """Rows (0-based, ascending) of the block that ends the file after a blank line, each
    a line shorter than the header that opens with a word; [] where there is none, where
    it is a single line (the last line alone is judged as a record cut short or a footer),
    or where a line of it opens with the word the last record above the blank line opens
    with (a site's name written first on every record) or holds a time of day ("Jun 01
    2021 00:30", a stamp opening with a month's name): records cut short, not a footer.

    Parameters
    ----------
    text_lines : list of str
        The file's lines.
    lines : numpy.ndarray of int
        Line number (1-based) of each data row.
    short : list of int
        Rows with fewer fields than the header.
    last : int
        The last data row.

    References
    ----------
    A blank line separates a table from text after it (RFC 4180 has no footer; a
    file's own notes follow its records: common practice).
    """
    shorts, block = set(short), []
    row = last
    while row in shorts and _OPENS_WITH_WORD.match(text_lines[lines[row] - 1]):
        block.append(row)
        row -= 1
    if len(block) < 2:
        return []
    above = int(lines[block[-1]]) - 2            # the line above the block, 0-based
    if above < 0 or text_lines[above].strip():
        return []
    record = next((line for line in reversed(text_lines[:above]) if line.strip()), "")
    opening = _OPENING_WORD.match(record)
    written = [text_lines[lines[row] - 1] for row in block]
    if any(_CLOCK.search(line) for line in written) or (
            opening and any(_OPENING_WORD.match(line)[1] == opening[1] for line in written)):
        return []
    return block[::-1]


def summary_rows(stamp_text: pd.Series, time_columns) -> int:
    """How many rows end the file with a word for their stamp (a spreadsheet's statistics
    under the records), 0 where none or where every row has one.

    A row whose stamp is the time column's own name (the header written again) or a
    word for no value ("NULL", "NaT": a record without a date) is no summary; the stamp
    parser names those.

    References
    ----------
    Spreadsheets write a column's statistics in a row under its values (AVERAGE, SUM;
    common practice).
    """
    if not len(stamp_text) or not _WORD_STAMP.fullmatch(str(stamp_text.iloc[-1]).strip()):
        return 0                 # the usual file: its last stamp is a stamp (one match)
    text = stamp_text.astype(str).str.strip()
    header = " ".join(time_columns)
    words = (text.str.fullmatch(_WORD_STAMP.pattern).to_numpy() & (text != header).to_numpy()
             & ~text.str.fullmatch(NULL_STAMP.pattern).to_numpy())
    if words.all() or not words[-1:].any():
        return 0
    return int(len(words) - 1 - np.flatnonzero(~words)[-1])


#: Words a spreadsheet or a statistics export writes for the statistics of a column
#: (English, German, French, Spanish; spreadsheet function names AVERAGE, STDEV, ...),
#: lower case with only their letters ("Std. dev." -> "stddev"); common practice (m).
STATISTICS_WORDS = frozenset({
    "mean", "average", "avg", "median", "mode", "max", "maximum", "min", "minimum", "sum",
    "total", "totals", "count", "n", "std", "stdev", "stddev", "sd", "standarddeviation",
    "var", "variance", "range", "se", "sem", "stderr", "standarderror",
    "mittelwert", "mittel", "durchschnitt", "summe", "anzahl", "standardabweichung",
    "moyenne", "somme", "médiane", "mediane", "nombre", "écarttype", "ecarttype",
    "promedio", "media", "suma", "mediana", "máximo", "maximo", "mínimo", "minimo",
    "cuenta", "desviaciónestándar", "desviacionestandar",
})


def dropped_rows_hold_no_record(stamp_words: pd.Series, cells: pd.DataFrame) -> bool:
    """Whether rows whose stamp is a word (:func:`summary_rows`) surely hold no record.

    They do where every stamp word names a statistic (:data:`STATISTICS_WORDS`: "mean",
    "Std. dev.") or where no other cell of theirs holds a value ("END OF FILE,,,,"). A
    row of values under another word ("Invalid Date", "ERROR") may be a record whose
    stamp was lost, which the reader cannot tell from a summary.

    Parameters
    ----------
    stamp_words : pandas.Series of str
        The rows' stamp text.
    cells : pandas.DataFrame
        The rows' other cells, as written.

    Returns
    -------
    bool
    """
    letters = stamp_words.astype(str).str.casefold().str.replace(r"[\W\d_]+", "", regex=True)
    if letters.isin(STATISTICS_WORDS).all():
        return True
    return bool(cells.astype(str).apply(lambda column: column.str.strip() == "").all().all())
