"""Site quality flags written as words or letters ("OK"/"BAD", "A"/"B"/"C").

Processing programs and tower databases write a record's quality as a word or a grade
letter as often as a number. Where ``[input] flag_accept`` lists words, the words it lists
keep a record and every other value of the flag columns rejects it, as a number not listed
does; empty cells and the missing codes stay missing (no flag, the record kept, as for
numeric flags). The reader turns each cell into a code before its numbers are read: the
listed words into their places in the list (0, 1, ...), every other value into the next
number, so that the flag checks run unchanged; :func:`labels` names the codes again in
their messages. Words are compared as written, blanks around them aside ("ok" is not
"OK": a case a program does not write is no flag it set). Before round layouts49 such a
``flag_accept`` was refused ("recode text flags as numbers in a copy of the file").

References
----------
Mauder, M., & Foken, T. (2004). Documentation and instruction manual of the eddy
covariance software package TK2. Univ. Bayreuth, Abt. Mikrometeorol., Arbeitsergebnisse
26 (m): the 0/1/2 flag scheme; grade letters and words are common practice of station
databases (m).
"""
from __future__ import annotations

import math

import pandas as pd


def are_words(flag_accept) -> bool:
    """Whether `flag_accept` (a checked, non-empty sequence) lists words only."""
    return all(isinstance(value, str) for value in flag_accept)


def accept_codes(words: tuple) -> tuple:
    """The codes of the listed words: their places in the list [-]."""
    return tuple(float(place) for place in range(len(words)))


def labels(words: tuple) -> dict:
    """Code -> the text a message shows for it."""
    return {**{float(place): repr(word) for place, word in enumerate(words)},
            float(len(words)): "an unlisted value"}


def coded(cells: pd.Series, words: tuple, missing: tuple) -> tuple[pd.Series, dict]:
    """A flag column's cells as codes, and each value written with its count.

    Parameters
    ----------
    cells : pandas.Series of str
        The column as read.
    words : tuple of str
        ``[input] flag_accept``.
    missing : tuple
        The missing codes applied to the column (numbers or words).

    Returns
    -------
    tuple of (pandas.Series, dict)
        The cells with each listed word replaced by its place in `words` and each other
        value (another word, a number) by ``len(words)``; empty cells and missing codes
        kept as written. And value -> count of the cells replaced, in order of count.

    Examples
    --------
    >>> codes, counts = coded(pd.Series(["OK", "BAD", "", "-9999", "OK "]), ("OK",), (-9999,))
    >>> list(codes), counts
    (['0', '1', '', '-9999', '0'], {'OK': 2, 'BAD': 1})
    """
    stripped = cells.str.strip()
    numbers = pd.to_numeric(stripped, errors="coerce")
    number_codes = [float(code) for code in missing if finite_number(code) is not None]
    word_codes = {str(code).strip() for code in missing if finite_number(code) is None}
    kept = ((stripped == "") | stripped.isin(word_codes) | numbers.isin(number_codes)
            | stripped.str.lower().isin({"nan", "-nan", "+nan"}))   # no value, always
    place = {word.strip(): str(k) for k, word in enumerate(words)}
    out = stripped.map(place).fillna(str(len(words)))
    out = cells.where(kept.to_numpy(), out)
    written = stripped[~kept.to_numpy()]
    counts = written.value_counts()
    return out, dict(sorted(((str(value), int(count)) for value, count in counts.items()),
                            key=lambda item: (-item[1], item[0])))


def finite_number(code) -> float | None:
    """`code` (a setting's number or word, a cell) as a finite float, else None."""
    try:
        value = float(code)
    except (TypeError, ValueError):
        return None
    return value if math.isfinite(value) else None


def is_number(text: str) -> bool:
    """Whether a flag value as written is a finite number ("2", "0.0")."""
    return finite_number(text) is not None


def shown(value: float, words: tuple | None, counts: dict | None = None) -> str:
    """A flag value as a message shows it: the word for a code, the values not listed
    (with their counts, from `counts`, value written -> records) for the other code, or
    the number where the flags are numbers."""
    if words is None:
        return f"{value:g}"
    if float(value) == float(len(words)):
        other = [f"{word!r} in {count}" for word, count in
                 sorted((counts or {}).items(), key=lambda item: (-item[1], item[0]))
                 if word not in words]
        return ("values not listed (" + ", ".join(other[:6])
                + (" and more" if len(other) > 6 else "") + ")" if other
                else "values not listed")
    return labels(words).get(float(value), f"{value:g}")


def counts_note(columns: list, counts: dict, words: tuple) -> str:
    """The reader note naming the values the flag columns hold and what each does.

    Examples
    --------
    >>> counts_note(["qc"], {"OK": 40, "BAD": 3}, ("OK",))
    "flag column(s) 'qc' written as words: 'OK' in 40 record(s) kept by [input] flag_accept, 'BAD' in 3 rejected"
    """
    counts = dict(sorted(counts.items(), key=lambda item: (-item[1], item[0])))
    listed = [f"{value!r} in {count}" for value, count in counts.items() if value in words]
    other = [f"{value!r} in {count}" for value, count in counts.items()
             if value not in words]
    return (f"flag column(s) {', '.join(repr(c) for c in columns)} written as words: "
            f"{', '.join(listed) or 'no listed word in any'} record(s) kept by [input] "
            "flag_accept" + (f", {', '.join(other[:6])}{' and more' if len(other) > 6 else ''}"
                             " rejected" if other else ""))
