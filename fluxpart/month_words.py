"""Month names of other languages in stamps read as the English names ``%b``/``%B`` read.

A spreadsheet or logger set to a German, French or Spanish locale (since layouts52 an
Italian, Dutch or Portuguese one too) writes its month abbreviations ("05-Mär-2023",
"05-déc.-2023", "05-dic-2023", "05-mrt-2023") or names ("5. März 2023");
``strptime`` reads only the English ones (the C locale). Where the format reads a month
by name and every word of letters in the stamps that is no English month is a month of
one of these languages, the words are written as the English names and read; the
tables are checked free of clashes (no word names two months), so the month is
unambiguous. A word in none of the tables is left for the reader, which names it.
"""
from __future__ import annotations

import re
import unicodedata

import pandas as pd

_ENGLISH_ABBREVIATIONS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep",
                          "Oct", "Nov", "Dec")
_ENGLISH_NAMES = ("January", "February", "March", "April", "May", "June", "July", "August",
                  "September", "October", "November", "December")

#: each language's words for months 1..12: full names and the abbreviations its locales
#: and style guides write (without the point), lower case; from memory (m): the German,
#: French and Spanish month names (Duden; Imprimerie nationale, Lexique des règles
#: typographiques; RAE, Ortografía 2010) and the abbreviations of the glibc locales
#: de_DE, fr_FR and es_ES, with the spellings written without accents
_MONTH_WORDS = {
    "German": (("januar", "jan", "jän", "jänner"), ("februar", "feb"),
               ("märz", "mär", "mrz", "maerz", "maer"), ("april", "apr"), ("mai",),
               ("juni", "jun"), ("juli", "jul"), ("august", "aug"),
               ("september", "sep", "sept"), ("oktober", "okt"), ("november", "nov"),
               ("dezember", "dez")),
    "French": (("janvier", "janv", "jan"), ("février", "févr", "fév", "fevrier", "fevr", "fev"),
               ("mars", "mar"), ("avril", "avr"), ("mai",), ("juin",),
               ("juillet", "juil"), ("août", "aout", "aoû"), ("septembre", "sept", "sep"),
               ("octobre", "oct"), ("novembre", "nov"), ("décembre", "déc", "decembre", "dec")),
    "Spanish": (("enero", "ene"), ("febrero", "feb"), ("marzo", "mar"), ("abril", "abr"),
                ("mayo", "may"), ("junio", "jun"), ("julio", "jul"), ("agosto", "ago"),
                ("septiembre", "setiembre", "sep", "sept", "set"), ("octubre", "oct"),
                ("noviembre", "nov"), ("diciembre", "dic")),
    # since layouts52 (refused before, naming the word): Italian, Dutch and Portuguese,
    # the month names (Treccani; Woordenlijst Nederlandse Taal; Acordo Ortográfico 1990)
    # and the abbreviations of the glibc locales it_IT, nl_NL and pt_PT/pt_BR (m)
    "Italian": (("gennaio", "gen"), ("febbraio", "feb"), ("marzo", "mar"), ("aprile", "apr"),
                ("maggio", "mag"), ("giugno", "giu"), ("luglio", "lug"), ("agosto", "ago"),
                ("settembre", "set", "sett"), ("ottobre", "ott"), ("novembre", "nov"),
                ("dicembre", "dic")),
    "Dutch": (("januari", "jan"), ("februari", "feb"), ("maart", "mrt", "mar"),
              ("april", "apr"), ("mei",), ("juni", "jun"), ("juli", "jul"),
              ("augustus", "aug"), ("september", "sep", "sept"), ("oktober", "okt"),
              ("november", "nov"), ("december", "dec")),
    "Portuguese": (("janeiro", "jan"), ("fevereiro", "fev"), ("março", "marco", "mar"),
                   ("abril", "abr"), ("maio", "mai"), ("junho", "jun"), ("julho", "jul"),
                   ("agosto", "ago"), ("setembro", "set"), ("outubro", "out"),
                   ("novembro", "nov"), ("dezembro", "dez")),
}


def _month_table() -> dict[str, int]:
    """Word (lower case, NFC) -> month 1..12; a word naming two months raises at import."""
    month_of = {}
    for months in _MONTH_WORDS.values():
        for month, words in enumerate(months, 1):
            for word in words:
                if month_of.setdefault(word, month) != month:
                    raise ValueError(f"month word {word!r} names months {month_of[word]} "
                                     f"and {month}")
    return month_of


MONTHS = _month_table()
_ENGLISH = {w.lower(): n % 12 + 1 for n, w in enumerate(_ENGLISH_ABBREVIATIONS + _ENGLISH_NAMES)}
_WORD = re.compile(r"[^\W\d_]+\.?")


def english_months(text: pd.Series, time_format: str) -> pd.Series:
    """Stamps with month words of German, French, Spanish, Italian, Dutch or Portuguese
    written in English.

    Parameters
    ----------
    text : pandas.Series of str
        Stamp text per record.
    time_format : str
        ``[input] time_format`` (a strptime format).

    Returns
    -------
    pandas.Series of str
        The stamps with each month word (its abbreviation point too, unless the format
        writes a point after the month) as ``%b`` or ``%B`` reads it where one is foreign; `text`
        itself where the format reads no month name or a word of letters is neither an
        English month nor one of the tables.

    References
    ----------
    ISO/IEC 9899:2011, section 7.27.3.5: ``%b`` and ``%B`` are the locale's month names,
    English in the "C" locale (m); the month names of each language as in the tables'
    note (m).
    """
    by_name = re.search(r"%([bB])(\.?)", time_format)
    if by_name is None or text.empty:
        return text
    names = _ENGLISH_NAMES if by_name.group(1) == "B" else _ENGLISH_ABBREVIATIONS
    point = by_name.group(2)
    words = pd.Series(text.str.findall(_WORD).explode().dropna().unique())
    if words.empty:
        return text
    keys = words.map(lambda w: unicodedata.normalize("NFC", w.rstrip(".").lower()))
    foreign = ~keys.isin(set(_ENGLISH)) & keys.isin(set(MONTHS))
    known = keys.isin(set(_ENGLISH)) | foreign
    if not foreign.any() or (~known & ~keys.isin({"am", "pm", "t", "z", "utc", "gmt"})).any():
        return text
    # every month word, English ones too ("oct." of a French file under %b), as %b or %B
    # reads it
    english = {w: names[(_ENGLISH.get(k) or MONTHS[k]) - 1] + (point if w.endswith(".") else "")
               for w, k in zip(words[known], keys[known], strict=True)}
    pattern = re.compile(r"(?<![^\W\d_])(?:" + "|".join(
        re.escape(w) for w in sorted(english, key=len, reverse=True)) + r")(?![^\W\d_])")
    return text.str.replace(pattern, lambda m: english[m.group(0)], regex=True)
