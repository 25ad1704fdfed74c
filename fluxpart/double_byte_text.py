"""East Asian double-byte encodings named for a file that is no UTF-8.

A spreadsheet saved as CSV on a Chinese-, Japanese- or Korean-locale system writes its
names ("时间", "気温", "기온") in the locale's legacy encoding: GB18030 (the Chinese
national standard, a superset of GB 2312) or EUC-KR (Korean). Both write the characters
of their national sets as two bytes of 0xA1 to 0xFE each, where a single-byte encoding
(Latin-1, cp1252) writes one ("°C" is 0xB0 followed by the ASCII "C"). Big5 and
Shift_JIS use second bytes in the ASCII range too, so their runs cannot be told apart
from text and are not named. Read as
UTF-8 such a file fails at its first name; the reader's refusal named only the
single-byte encodings, whose reading of "时间" is "Ê±¼ä" (round layouts49). A line whose
bytes outside ASCII all come in runs of even length of such bytes, each decoding in one
of these encodings to ideographs, kana or hangul only, names that encoding with its
reading. A run between two ASCII letters is read as letters of a word in a Latin
script ("Radiação": "çã" is 0xE7 0xE3 in Latin-1, which GB18030 reads as one ideograph),
and the line then names no double-byte encoding (review70). The
choice stays the user's: the bytes of two such encodings can both decode to ideographs.

References
----------
GB 18030-2005, Information technology - Chinese coded character set (m); KS X 1001 and
its EUC-KR form (m); WHATWG Encoding Standard (2024), legacy multi-byte encodings (m).
"""
from __future__ import annotations

import re

#: Double-byte encodings (Python codec names) in the order they are named.
DOUBLE_BYTE = ("gb18030", "euc-kr")

#: Runs of bytes outside ASCII.
_RUNS = re.compile(rb"[\x80-\xff]+")
#: A run of bytes outside ASCII between two ASCII letters.
_IN_A_WORD = re.compile(rb"[A-Za-z][\x80-\xff]+[A-Za-z]")
#: CJK symbols and punctuation, hiragana, katakana, CJK unified ideographs (and their
#: extension A), hangul syllables, full-width forms (not the half-width katakana).
_EAST_ASIAN = re.compile("[\u3000-\u30ff\u3400-\u4dbf\u4e00-\u9fff\uac00-\ud7a3"
                         "\uff01-\uff5e]")


def double_byte_readings(line: bytes) -> dict:
    """Encoding -> the line's text outside ASCII as that encoding reads it, for each of
    :data:`DOUBLE_BYTE` under which every run of bytes outside ASCII is two-byte text of
    East Asian scripts only.

    Parameters
    ----------
    line : bytes
        One line of the file (its header, usually), holding bytes outside ASCII.

    Returns
    -------
    dict
        Empty where a run has odd length or a byte below 0xA1 (one byte a character,
        a single-byte encoding's), or stands between two ASCII letters (within a word
        of a Latin script), or no encoding reads the runs so.

    Examples
    --------
    >>> double_byte_readings("时间,气温".encode("gb18030"))["gb18030"]
    '时间 气温'
    >>> double_byte_readings("Zeit,Temp °C".encode("cp1252"))
    {}
    >>> double_byte_readings("Radiação,Precipitação".encode("cp1252"))
    {}
    """
    runs = _RUNS.findall(line)
    if not runs or any(len(run) % 2 or min(run) < 0xA1 for run in runs):
        return {}
    if _IN_A_WORD.search(line):
        return {}
    readings = {}
    for encoding in DOUBLE_BYTE:
        try:
            words = [run.decode(encoding) for run in runs]
        except UnicodeDecodeError:
            continue
        if all(_EAST_ASIAN.fullmatch(character) for word in words for character in word):
            readings[encoding] = " ".join(words)
    return readings
