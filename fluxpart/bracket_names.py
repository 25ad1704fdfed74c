"""Names of a whitespace-delimited header whose bracketed units hold blanks.

A logger or a program writing aligned columns often names each column with its unit in
brackets, "co2_net [umol m-2 s-1]" or "air_c (degC)". In a file whose fields are
separated by runs of blanks, such a header splits into more words than the records have
fields. Where the words joined at the brackets (a bracket group and the name before it,
blanks within the brackets kept) give exactly as many names as the first record has
fields, and the plain split does not, those are the header's names: the only split that
puts one name over each field. Any other header is left as written (the reader names
the mismatch).
"""
from __future__ import annotations

import re

#: a name: words up to a bracket group that may hold blanks, or a word alone
_NAME = re.compile(r"\S*[\[(][^\[\]()]*[\])]\S*|\S+")
#: stands for a blank inside a bracket group while the header is parsed: a
#: private-use character, no blank to the parser and in no logger's header
PLACEHOLDER = "\ue000"


def bracket_names(header: str, record: str) -> list | None:
    """The header's names joined at their bracket groups, or None.

    Parameters
    ----------
    header : str
        The header line of a whitespace-delimited file.
    record : str
        Its first record line.

    Returns
    -------
    list of str or None
        One name a field of `record` ("co2_net [umol m-2 s-1]", blanks inside the
        brackets as written, runs of them as one), where `header` split at blanks has
        another number of words and split at blanks outside brackets has as many names
        as `record` has fields; else None.

    Examples
    --------
    >>> bracket_names("time co2 [umol m-2 s-1] ta (degC)", "202101010030 1.2 3.4")
    ['time', 'co2 [umol m-2 s-1]', 'ta (degC)']
    """
    words, fields = header.split(), len(record.split())
    if len(words) == fields or "[" not in header and "(" not in header:
        return None
    names = []
    for word in _NAME.findall(header):
        if word[0] in "[(" and names:
            # a bracket group standing apart: the unit of the name before it
            names[-1] = f"{names[-1]} {word}"
            continue
        names.append(word)
    names = [" ".join(name.split()) for name in names]
    return names if len(names) == fields else None


def placeholder_line(names: list) -> str:
    """The header line with each name's blanks as :data:`PLACEHOLDER`, one blank apart."""
    return " ".join(name.replace(" ", PLACEHOLDER) for name in names)


def restored(name) -> str:
    """A parsed name with its blanks back."""
    return name.replace(PLACEHOLDER, " ") if isinstance(name, str) else name
