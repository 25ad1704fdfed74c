"""Column names the file writes in another Unicode normalization form than the settings.

"Güte" is written either with one code point for ü (U+00FC, composed: NFC, as most
editors type it) or as u followed by a combining diaeresis (U+0308, decomposed: NFD, as
macOS file systems and some of its programs store names). The two are canonically
equivalent, the same text by the Unicode standard, so a header name equal to a setting's
name in NFC is that column (layouts38; refused before as a look-alike, "did you mean
'Güte'?", though the two show the same characters).
"""
from __future__ import annotations

import unicodedata


def settings_spelling(file_names: list, wanted) -> dict:
    """File column name -> the setting's spelling, for names equal only in NFC.

    Parameters
    ----------
    file_names : list of str
        The file's column names as read.
    wanted : iterable of str
        Every name the settings give (mapped columns, time and flag columns, other names).

    Returns
    -------
    dict
        Only names that differ as written, equal as NFC, and whose setting's spelling is
        not a name of the file already; empty for the usual file.

    References
    ----------
    The Unicode Consortium. Unicode Standard Annex #15, Unicode Normalization Forms:
    canonical equivalence and the composed form NFC (m).
    """
    names = [name for name in file_names if isinstance(name, str)]
    if all(name.isascii() for name in names):
        return {}
    written = set(names)
    by_form = {unicodedata.normalize("NFC", name): name for name in wanted
               if isinstance(name, str) and name not in written}
    return {name: by_form[form] for name in names
            if name not in by_form.values()
            and (form := unicodedata.normalize("NFC", name)) in by_form}
