"""Layouts of the layouts49 round: units, page breaks, zone suffixes and encodings.

NEE written in mmol m-2 s-1 or as a mass flux in µg CO2 m-2 s-1, and VPD in psi or in
inches of mercury, were refused as units fluxpart does not know; declared, they are now
read. A paged export (a form feed opening each page, the header again under it) was
refused as a header repeated after a restart; it is read as the clean file with a note.
Stamps of RFC 9557's extended form ("+02:00[Europe/Berlin]") were refused as not matching
"ISO8601"; they are read by their offsets where each is its zone's, and refused naming both
where not. A GB18030 file undeclared was told to set Latin-1; the refusal now names
GB18030 with the names as it reads them.

Outside facts, each named beside its check: the molar mass of CO2 from the IUPAC/CIAAW
conventional atomic weights C 12.011 and O 15.999 (m); 1 psi = 6894.757 Pa and 1 inHg
(conventional) = 3386.389 Pa (NIST SP 811 (2008), appendix B.8 (m)); form feed is the
page-break control of ECMA-48 (m); Central European Summer Time is UTC+2 in June (IANA
time zone database, Europe/Berlin); the GB18030 bytes of "时间" come from Python's codec
of the national standard. Everything else is invented known truth: the records as
written, read as the clean file is.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records, 1-8 June 2021

from fluxpart.errors import InputFileError, TimestampError

CO2_GRAMS_PER_MOLE = 12.011 + 2 * 15.999       # IUPAC/CIAAW conventional weights (m)
HPA_PER_PSI = 6894.757 / 100.0                 # NIST SP 811, B.8 (m)
HPA_PER_INHG = 3386.389 / 100.0                # NIST SP 811, B.8, conventional inHg (m)


def _lines(stamps, values, head=("stamp", *NAMES)):
    return [",".join(head)] + [",".join([s] + [f"{v:.12g}" for v in row])
                               for s, row in zip(stamps, values, strict=True)]


def _clean(tmp_path):
    ends, values = _records()
    path = tmp_path / "clean.csv"
    path.write_text("\n".join(_lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values)) + "\n")
    return ends, values, _read(path)[0]


@pytest.mark.parametrize(("column", "variable", "unit", "per_canonical"), [
    (0, "nee", "mmol m-2 s-1", 1e-3),                       # SI prefixes
    (0, "nee", "µg CO2 m-2 s-1", CO2_GRAMS_PER_MOLE),       # 1 µmol CO2 = 44.009 µg
    (4, "vpd", "psi", 1.0 / HPA_PER_PSI),
    (4, "vpd", "inHg", 1.0 / HPA_PER_INHG),
])
def test_nee_and_vpd_in_other_units_declared_read_as_the_clean_file(tmp_path, column,
                                                                     variable, unit,
                                                                     per_canonical):
    """The column written in `unit` (the canonical value times `per_canonical`), declared
    in [input.units]: read to 1e-12 of the clean file; refused before as unknown."""
    ends, values, expected = _clean(tmp_path)
    written = values.copy()
    written[:, column] = values[:, column] * per_canonical
    path = tmp_path / "unit.csv"
    path.write_text("\n".join(_lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], written)) + "\n")
    read, _ = _read(path, units={"vpd": "hPa", variable: unit})
    np.testing.assert_allclose(read[variable], expected[variable], rtol=1e-11)
    pd.testing.assert_index_equal(read.index, expected.index)


def test_nee_in_umol_declared_in_micrograms_is_refused_naming_umol(tmp_path):
    """Twin: the clean file's NEE (µmol m-2 s-1) declared "µg CO2 m-2 s-1" is read 44.0
    times too small (the molar mass of CO2, above), 99 % of values then below 1 µmol
    m-2 s-1 and night noise below any flux record's: refused naming µmol (read before,
    every flux 44 times too small, as no unit check judged a declared unit)."""
    from fluxpart.errors import ImplausibleValueError
    _clean(tmp_path)
    with pytest.raises(ImplausibleValueError, match=r"read as 'µg CO2 m-2 s-1', 44 times "
                                                    r"smaller.*set \[input.units\] nee = "
                                                    r'"µmol m-2 s-1"'):
        _read(tmp_path / "clean.csv", units={"vpd": "hPa", "nee": "µg CO2 m-2 s-1"})


def test_a_paged_export_with_the_header_on_every_page_reads_as_the_clean_file(tmp_path):
    """A form feed and the header again above every day's 48 records: read as the clean
    file, with a note counting the 7 page breaks (8 days)."""
    ends, values, expected = _clean(tmp_path)
    text = _lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values)
    paged = [text[0]]
    for k, line in enumerate(text[1:]):
        if k and k % 48 == 0:
            paged.append("\f" + text[0])
        paged.append(line)
    path = tmp_path / "paged.csv"
    path.write_text("\n".join(paged) + "\n")
    read, report = _read(path)
    pd.testing.assert_frame_equal(read, expected)
    assert any("7 line(s) opened by a page break" in n for n in report.notes), report.notes


def _zoned(ends, offset):
    """End stamps (UTC+1 standard time) on the civil clock of Europe/Berlin (UTC+2 in
    June), written with `offset` and the zone in brackets."""
    return [f"{e + pd.Timedelta('1h'):%Y-%m-%dT%H:%M}{offset}[Europe/Berlin]" for e in ends]


def test_stamps_with_their_zone_after_the_offset_read_by_the_offsets(tmp_path):
    """ "2021-06-01T01:30+02:00[Europe/Berlin]" (RFC 9557): read as the clean file."""
    ends, values, expected = _clean(tmp_path)
    path = tmp_path / "zoned.csv"
    path.write_text("\n".join(_lines(_zoned(ends, "+02:00"), values)) + "\n")
    read, report = _read(path, time_format="ISO8601")
    pd.testing.assert_frame_equal(read, expected)
    assert any("[Europe/Berlin]" in n and "RFC 9557" in n for n in report.notes), report.notes


def test_an_offset_its_zone_does_not_keep_is_refused_naming_both(tmp_path):
    """Twin: "+01:00[Europe/Berlin]" in June, when Berlin keeps +02:00: refused."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "zoned.csv"
    path.write_text("\n".join(_lines(_zoned(ends, "+01:00"), values)) + "\n")
    with pytest.raises(TimestampError, match=r"line 2 .*offset \+01:00 is not that of its "
                                             r"zone \[Europe/Berlin\].*\(\+02:00\); 384 such"):
        _read(path, time_format="ISO8601")


def test_an_offset_its_zone_does_not_keep_is_refused_under_a_format_of_another_order(
        tmp_path):
    """Twin under time_format = "%d.%m.%Y %H:%M%z": "+01:00[Europe/Berlin]" in June is
    refused as under "ISO8601" (before review70 read by the offset, with a note that
    each offset was the zone's); "+02:00" reads as the clean file."""
    ends, values, expected = _clean(tmp_path)
    for offset in ("+01:00", "+02:00"):
        stamps = [f"{e + pd.Timedelta('1h'):%d.%m.%Y %H:%M}{offset}[Europe/Berlin]"
                  for e in ends]
        path = tmp_path / f"zoned{offset[1:3]}.csv"
        path.write_text("\n".join(_lines(stamps, values)) + "\n")
        if offset == "+01:00":
            with pytest.raises(TimestampError, match=r"offset \+01:00 is not that of its "
                                                     r"zone \[Europe/Berlin\].*\(\+02:00\)"):
                _read(path, time_format="%d.%m.%Y %H:%M%z")
        else:
            read, _ = _read(path, time_format="%d.%m.%Y %H:%M%z")
            pd.testing.assert_frame_equal(read, expected)


def test_a_gb18030_header_undeclared_is_refused_naming_gb18030(tmp_path):
    """Names in Chinese saved as GB18030, no encoding declared: the refusal names
    "gb18030" and the names as it reads them; declared, the file reads as the clean one."""
    ends, values, expected = _clean(tmp_path)
    names = ["时间", "二氧化碳通量", "摩擦速度", "总辐射", "气温", "饱和差"]
    path = tmp_path / "chinese.csv"
    path.write_bytes(("\n".join(_lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values,
                                       head=names)) + "\n").encode("gb18030"))
    mapping = dict(zip(["nee", "ustar", "rg", "tair", "vpd"], names[1:], strict=True))
    with pytest.raises(InputFileError, match=r'encoding = "gb18030".*as \'gb18030\' it reads '
                                             r"'时间 二氧化碳通量"):
        _read(path, columns=mapping, time_column="时间")
    read, _ = _read(path, columns=mapping, time_column="时间", encoding="gb18030")
    pd.testing.assert_frame_equal(read, expected)


def test_a_cp1252_degree_sign_is_not_named_as_a_double_byte_encoding(tmp_path):
    """Twin: a header "t_air °C" in cp1252 (one byte 0xB0, then ASCII): Latin-1 stays the
    advice, no Chinese or Korean encoding named."""
    ends, values, _ = _clean(tmp_path)
    head = ["stamp", "co2_flux", "us", "sw", "t_air °C", "vpd"]
    path = tmp_path / "degree.csv"
    path.write_bytes(("\n".join(_lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values,
                                       head=head)) + "\n").encode("cp1252"))
    with pytest.raises(InputFileError, match=r'set \[input\] encoding = "latin-1"') as caught:
        _read(path)
    assert "gb18030" not in str(caught.value)


def test_latin_letters_in_pairs_within_words_are_not_named_as_gb18030(tmp_path):
    """Twin: Portuguese names in cp1252 whose only letters outside ASCII come in pairs
    within words ("Radiação", "Precipitação": "çã" is 0xE7 0xE3, one ideograph in
    GB18030): Latin-1 stays the advice, with the names as it reads them (review70:
    GB18030 was named first, reading "玢")."""
    ends, values, _ = _clean(tmp_path)
    head = ["stamp", "co2_flux", "us", "Radiação", "t_air", "vpd", "Precipitação"]
    rows = _lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values, head=head[:-1])
    path = tmp_path / "portuguese.csv"
    path.write_bytes(("\n".join([",".join(head)] + [r + ",0" for r in rows[1:]])
                      + "\n").encode("cp1252"))
    with pytest.raises(InputFileError, match=r'set \[input\] encoding = "latin-1".*'
                                             r"'Radiação'") as caught:
        _read(path)
    assert "gb18030" not in str(caught.value)


def _flagged(tmp_path, letters, name="flags.csv"):
    """The records with a flag column "qc": grades 0, 1, 2 in turn, written as
    `letters`, and the flag of every fifth record a missing code."""
    ends, values = _records()
    grades = np.arange(len(ends)) % 3
    cells = [letters[g] if k % 5 else "-9999" for k, g in enumerate(grades)]
    rows = _lines([f"{e:%Y-%m-%d %H:%M}" for e in ends], values)
    path = tmp_path / name
    path.write_text("\n".join([rows[0] + ",qc"] + [r + "," + c for r, c in
                                                   zip(rows[1:], cells, strict=True)]) + "\n")
    return path, grades


def test_flags_written_as_letters_keep_the_records_flag_accept_lists(tmp_path):
    """Grades "A", "B", "C" with flag_accept = ["A", "B"]: the site flag is the one the
    digits 0, 1, 2 give under flag_accept = [0, 1] (C rejects, a missing code keeps), and
    a note counts each letter."""
    from test_robustness_layouts26 import MAPPING
    path, grades = _flagged(tmp_path, "ABC")
    read, report = _read(path, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=["A", "B"])
    digits, _ = _flagged(tmp_path, "012", "digits.csv")
    expected, _ = _read(digits, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=[0, 1])
    pd.testing.assert_series_equal(read["nee_flag"], expected["nee_flag"])
    assert read["nee_flag"].sum() == sum(g == 2 for k, g in enumerate(grades) if k % 5)
    assert ("flag column(s) 'qc' written as words: 'B' in 103, 'A' in 102 record(s) kept by "
            "[input] flag_accept, 'C' in 102 rejected") in report.notes, report.notes


def test_letters_in_another_case_than_flag_accept_are_refused_naming_them(tmp_path):
    """Twin: the file writes "a", "b", "c", the config lists "A", "B": no record kept, so
    refused naming the values not listed."""
    from test_robustness_layouts26 import MAPPING

    from fluxpart.errors import ImplausibleValueError
    path, _ = _flagged(tmp_path, "abc")
    with pytest.raises(ImplausibleValueError, match=r"values not listed \('b' in 103, 'a' in 102, 'c' in 102\)"):
        _read(path, columns=MAPPING | {"nee_flag": "qc"}, flag_accept=["A", "B"])


def test_a_listed_word_also_among_the_missing_codes_still_keeps_its_records(tmp_path):
    """Twin: "A" listed in flag_accept and in [input] missing (a code list shared by
    every column): the site flag is the one without it, and a warning says "A" is
    missing in the data columns only, as for a number (mistakes17). Before review70 "A"
    was read as no flag, every record flagged was a rejected one, and the file was
    refused as a flag scale reversed."""
    from test_robustness_layouts26 import MAPPING
    path, _ = _flagged(tmp_path, "ABC")
    columns = MAPPING | {"nee_flag": "qc"}
    expected, _ = _read(path, columns=columns, flag_accept=["A"])
    read, report = _read(path, columns=columns, flag_accept=["A"], missing=[-9999, "A"])
    pd.testing.assert_series_equal(read["nee_flag"], expected["nee_flag"])
    assert any("missing lists 'A'" in w for w in report.warnings), report.warnings


def test_a_humid_record_declared_in_kpa_is_not_told_to_be_inches_of_mercury():
    """VPD at 6 % of the saturation vapour pressure throughout (relative humidity 94 %,
    a cloud forest's) at 23-25 °C for ten days: declared kPa, no refusal names "inHg"
    (psi and inHg are no SI prefix's slip; review70: since layouts49 refused so, where
    no larger unit had judged a kPa record before); the same record declared hPa and
    written in kPa stays named kPa (a prefix's slip). Saturation vapour pressure:
    fluxpart's own, checked against the CRC Handbook in test_variables. The psi record of a
    file with rh beside it is still named psi from the VPD computed from rh and tair."""
    from fluxpart.unit_checks import mixup_messages
    from fluxpart.variables import saturation_vapour_pressure
    count = 48 * 10
    tair = 24.0 + np.sin(np.arange(count) / 7.6)
    vpd = 0.06 * saturation_vapour_pressure(tair)                  # hPa
    columns = {"vpd": "vpd", "tair": "tair"}
    kpa, _ = mixup_messages({"vpd": vpd, "tair": tair}, {"vpd": "kPa"}, columns, 30)
    assert "vpd" not in kpa, kpa
    hpa, _ = mixup_messages({"vpd": vpd / 10.0, "tair": tair}, {"vpd": "hPa"}, columns, 30)
    assert 'vpd = "kPa"' in hpa["vpd"]
    rh = np.linspace(40.0, 80.0, count)
    psi = saturation_vapour_pressure(tair) * (1 - rh / 100) / HPA_PER_PSI
    named, _ = mixup_messages({"vpd": psi, "tair": tair, "rh": rh}, {"vpd": "hPa"},
                              columns | {"rh": "rh"}, 30)
    assert 'the file is in psi' in named["vpd"]


@pytest.mark.parametrize("setting", [[""], ["OK", " "]])
def test_an_empty_word_in_flag_accept_is_refused_as_empty(setting):
    """flag_accept listing an empty word: refused naming it (an empty cell is no flag),
    not as numbers and words mixed (review70), no number being listed."""
    from fluxpart.errors import ConfigError
    from fluxpart.io import _check_flag_accept
    with pytest.raises(ConfigError, match="lists an empty word") as caught:
        _check_flag_accept(setting)
    assert "not both" not in str(caught.value)
