"""Layouts of the layouts44 round: month words of German, French and Spanish under %b/%B,
numbers with Fortran's exponent letter D, offsets written "UTC+1" under %z, a setting
naming a column by the parser's name for it ("Unnamed: 0", "x.1"), an empty
time_column, and one note for several files whose header opens with a comment mark.

Outside facts, each named beside its check: the month names of each language (Duden,
Imprimerie nationale, RAE; the glibc locales' abbreviations; from memory (m)) and
English as ``strptime`` reads them (Python's ``calendar.month_abbr`` in the C locale,
the general-purpose reference); the Fortran D edit descriptor (Fortran 2018, 13.7.2.3.3
(m)); ISO 8601 offsets (+01:00). Everything else is invented known truth: the records as
written.
"""

import calendar

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE

from fluxpart.errors import ConfigError, InputFileError, MissingColumnError, TimestampError
from fluxpart.io import read_table
from fluxpart.month_words import _ENGLISH, _MONTH_WORDS, MONTHS, english_months
from fluxpart.timestamps import parse_stamps


def _parse(text, time_format):
    series = pd.Series(text)
    return parse_stamps(series, time_format, time_columns=("stamp",), source="t.dat",
                        lines=np.arange(2, len(series) + 2), utc_offset=1.0).stamps


def _read(path, columns=MAPPING, time_column="stamp"):
    return read_table(path, columns=columns, units={"vpd": "kPa"}, site=SITE,
                      time_column=time_column, time_format="%Y%m%d%H%M", time_marks="end")


def test_no_month_word_names_two_months_nor_another_than_english():
    """Each language's table is twelve months; a word shared by tables or with English
    (Python's calendar in the C locale: 'Mar', 'May', 'Jun') names one month."""
    assert all(len(months) == 12 for months in _MONTH_WORDS.values())
    english = {calendar.month_abbr[m].lower(): m for m in range(1, 13)}
    assert {k: v for k, v in _ENGLISH.items() if k in english} == english
    assert all(MONTHS[w] == english[w] for w in MONTHS if w in english)


@pytest.mark.parametrize("text, time_format", [
    (["28-Feb-2021 23:30", "01-Mär-2021 00:00", "05-Dez-2021 12:00"], "%d-%b-%Y %H:%M"),
    (["28-févr.-2021 23:30", "01-mars-2021 00:00", "05-déc.-2021 12:00"], "%d-%b-%Y %H:%M"),
    (["28-feb-2021 23:30", "01-mar-2021 00:00", "05-dic-2021 12:00"], "%d-%b-%Y %H:%M"),
    (["28. Februar 2021 23:30", "1. März 2021 00:00", "5. Dezember 2021 12:00"],
     "%d. %B %Y %H:%M"),
    (["28.Feb.2021 23:30", "01.Mär.2021 00:00", "05.Dez.2021 12:00"], "%d.%b.%Y %H:%M"),
])
def test_month_words_of_german_french_and_spanish_are_read(text, time_format):
    """Refused before ("no English month abbreviation", French 'févr.' without a hint)."""
    want = pd.to_datetime(["2021-02-28 23:30", "2021-03-01 00:00", "2021-12-05 12:00"])
    np.testing.assert_array_equal(_parse(text, time_format), want)


def test_a_word_of_no_table_leaves_the_stamps_to_the_reader():
    """One word no table knows ('Sty', Polish January (m); Italian 'Gen' was this test's
    word until layouts52 added Italian): nothing is rewritten."""
    text = pd.Series(["31-Dic-2020 23:30", "01-Sty-2021 00:00"])
    assert english_months(text, "%d-%b-%Y %H:%M") is text
    with pytest.raises(TimestampError, match="no English month abbreviation"):
        _parse(list(text), "%d-%b-%Y %H:%M")


@pytest.mark.parametrize("suffix", ["UTC+1", "UTC+01:00", "GMT+0100"])
def test_offset_after_utc_letters_is_read_under_percent_z(suffix):
    """Read as +01:00 (the site's standard time, no shift); refused before."""
    read = _parse([f"2021-06-01 00:30 {suffix}", "2021-06-01 01:00 +01:00"],
                  "%Y-%m-%d %H:%M %z")
    assert list(read) == list(pd.to_datetime(["2021-06-01 00:30", "2021-06-01 01:00"]))


def test_offset_after_utc_letters_without_percent_z_names_it():
    with pytest.raises(TimestampError, match=r"ends in 'UTC\+1', a UTC offset: write %z"):
        _parse(["2021-06-01 00:30 UTC+1"], "%Y-%m-%d %H:%M")


def test_an_empty_time_column_names_the_empty_header_cell(tmp_path):
    frame, _ = _records(48)
    frame.rename(columns={"stamp": ""}).to_csv(tmp_path / "t.csv", index=False)
    with pytest.raises(ConfigError, match="an empty header cell names no column.*copy"):
        _read(tmp_path / "t.csv", time_column="")


@pytest.mark.parametrize("setting, found", [
    ({"time_column": "Unnamed: 0"}, r"column 1 has no name in the header"),
    ({"columns": MAPPING | {"tair": "t_air.1"}}, r"'t_air' is written 2 times.*copy number 2"),
])
def test_a_column_named_by_the_parsers_name_is_refused(tmp_path, setting, found):
    """pandas names an empty header cell "Unnamed: 0" and a second "t_air" "t_air.1":
    names not in the file, read before (layouts44)."""
    frame, _ = _records(48)
    frame.insert(3, "t_air_2", frame["t_air"])
    text = frame.to_csv(index=False).replace("t_air_2", "t_air", 1)
    if "time_column" in setting:
        text = text.replace("stamp", "", 1)
    (tmp_path / "t.csv").write_text(text)
    with pytest.raises(MissingColumnError, match=found):
        _read(tmp_path / "t.csv", **setting)


def test_several_files_with_marked_headers_get_one_note(tmp_path):
    """Eleven notes before (one a file)."""
    frame, _ = _records()
    for day in range(10):
        text = frame.iloc[48 * day:48 * day + 48].to_csv(index=False)
        (tmp_path / f"d{day}.csv").write_text("# " + text)
    read, report = _read([tmp_path / f"d{day}.csv" for day in range(10)])
    assert len(read) == 480
    # a note, not a warning: the layout was understood (readernotes51)
    marked = [n for n in report.notes if "comment mark" in n]
    assert not [w for w in report.warnings if "comment mark" in w]
    assert len(marked) == 1 and marked[0].startswith("10 input files")


def test_files_of_different_delimiters_are_named_as_such(tmp_path):
    """A comma flux file beside a semicolon drivers file: "set delimiter = ','" before,
    which then refused the other file."""
    frame, _ = _records(48)
    frame[["stamp", "co2", "us"]].to_csv(tmp_path / "flux.csv", index=False)
    frame[["stamp", "sw", "t_air", "vpd"]].to_csv(tmp_path / "drivers.csv", index=False,
                                                  sep=";")
    with pytest.raises(InputFileError, match=r'different delimiters \("," in .*flux.csv'
                                             r"'; \";\" in .*drivers.csv'\)"):
        read_table([tmp_path / "flux.csv", tmp_path / "drivers.csv"], columns=MAPPING,
                   units={"vpd": "kPa"}, site=SITE, time_column="stamp",
                   time_format="%Y%m%d%H%M", time_marks="end", delimiter=";")
