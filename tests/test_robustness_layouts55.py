"""Layouts of the layouts55 round: a second, undeclared missing-data code in a few cells of
the weather columns (files of two loggers joined), a UTF-8 byte-order mark before a
Latin-1 file, and a placeholder record of no values at a stamp the next record has.

Outside facts, each named beside its check: -6999 and -9999 are loggers' and data
centres' missing-data codes (common practice); no air temperature lies below -89.2 °C
(the lowest on record, Vostok 1983; WMO archive (m)) and no global radiation below 0 W m-2
beyond a pyranometer's night offset (WMO Guide, vol. I, ch. 7 (m)); the UTF-8 byte-order
mark is EF BB BF and Latin-1 writes "°" as the one byte B0 (Unicode Standard, section
23.8; ISO/IEC 8859-1 (m)), Python's codecs (the general-purpose reference) decode them.
Everything else is invented known truth: the records as written
(``test_robustness_layouts26._records``, 1-4 June 2021).
"""
import numpy as np
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records

from fluxpart.errors import FluxpartError, ImplausibleValueError


def _text(values, stamps=None, header=None):
    ends, _ = _records()
    stamps = stamps if stamps is not None else [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    lines = [header or ",".join(["stamp", *NAMES])]
    lines += [",".join([s] + [f"{v:.12g}" for v in row])
              for s, row in zip(stamps, values, strict=True)]
    return "\n".join(lines) + "\n"


def test_a_second_code_in_a_few_weather_cells_is_read_as_missing_named(tmp_path):
    """-6999 in 12 cells of the air temperature and 10 of Rg (3 % of 384), -9999 declared:
    before, the cells were kept as values (-6999 W m-2 in the tables beside an
    out-of-range flag) with a warning; now they are read as missing, named with the code
    and its count, and every other cell is read as written."""
    _, values = _records()
    (tmp_path / "clean.csv").write_text(_text(values))
    coded = values.copy()
    coded[20:32, 3] = -6999          # t_air
    coded[200:210, 2] = -6999        # sw
    (tmp_path / "t.csv").write_text(_text(coded))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    clean, _ = _read(tmp_path / "clean.csv", missing=(-9999,))
    assert frame["tair"].iloc[20:32].isna().all() and frame["rg"].iloc[200:210].isna().all()
    kept = np.ones(len(frame), dtype=bool)
    kept[20:32] = False
    np.testing.assert_array_equal(frame["tair"][kept], clean["tair"][kept])
    kept = np.ones(len(frame), dtype=bool)
    kept[200:210] = False
    np.testing.assert_array_equal(frame["rg"][kept], clean["rg"][kept])
    told = [w for w in report.warnings if "-6999" in w]
    assert len(told) == 2
    assert any(w.startswith("tair: the value -6999 alone occurs 12 times in column 't_air'")
               and "read as missing" in w for w in told)
    assert any(w.startswith("rg: the value -6999 alone occurs 10 times in column 'sw'")
               for w in told)
    assert not any("outside the plausible range" in w for w in report.warnings)


def test_two_codes_in_one_column_are_each_read_as_missing(tmp_path):
    """-6999 in 8 cells and -7999 in 6 of the air temperature (files of three loggers
    joined): each code read as missing, named; before the second was kept as a value
    (the first was only named)."""
    _, values = _records()
    values[20:28, 3] = -6999
    values[100:106, 3] = -7999
    (tmp_path / "t.csv").write_text(_text(values))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    assert frame["tair"].iloc[list(range(20, 28)) + list(range(100, 106))].isna().all()
    assert frame["tair"].notna().sum() == len(frame) - 14
    assert sum(w.startswith("tair: the value -") for w in report.warnings) == 2


def test_a_code_filling_much_of_a_column_is_still_refused(tmp_path):
    """Kept behaviour: -6999 in a quarter of the air temperatures is refused, the hint
    asking for it in [input] missing (too much of the record to pass on a warning)."""
    _, values = _records()
    values[:96, 3] = -6999
    (tmp_path / "t.csv").write_text(_text(values))
    with pytest.raises(ImplausibleValueError, match=r"the value -6999 alone occurs 96 times"):
        _read(tmp_path / "t.csv", missing=(-9999,))


def test_scattered_absurd_values_stay_values_for_screening(tmp_path):
    """Kept behaviour: three different absurd temperatures are no code (a logger repeats
    its code exactly): read as written, left to screening with the range warning."""
    _, values = _records()
    values[[5, 50, 70], 3] = [-300.5, -400.2, 95.0]
    (tmp_path / "t.csv").write_text(_text(values))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    assert list(frame["tair"].iloc[[5, 50, 70]]) == [-300.5, -400.2, 95.0]
    assert any(w.startswith("tair: 3 value(s) outside") for w in report.warnings)


def _latin1_with_a_mark(tmp_path):
    _, values = _records()
    header = ",".join(["stamp", *NAMES])
    units = ",".join(["-", "umol m-2 s-1", "m s-1", "W m-2", "°C", "hPa"])
    text = _text(values, header=header + "\n" + units)
    path = tmp_path / "t.csv"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("latin-1"))
    (tmp_path / "clean.csv").write_text(text)
    return path, _read(tmp_path / "clean.csv", rows_after_header=1)[0]


def test_utf8_mark_before_a_latin1_file_reads_as_the_declared_encoding(tmp_path):
    """A UTF-8 mark before Latin-1 bytes ("°" as B0, no UTF-8): with encoding = "latin-1"
    (the refusal's own advice) read as Latin-1 without the mark, noted; before, the mark
    ruled over the setting and the same refusal came again."""
    path, clean = _latin1_with_a_mark(tmp_path)
    frame, report = _read(path, rows_after_header=1, encoding="latin-1")
    assert frame.equals(clean)
    assert any("byte-order mark" in n and "read as latin-1" in n for n in report.notes)


def test_utf8_mark_before_a_latin1_file_undeclared_names_the_right_byte(tmp_path):
    """Undeclared, refused naming the byte that is no UTF-8 (B0 on line 2, the units
    line); before, the byte three places earlier ("0x2d", a hyphen) was named."""
    path, _ = _latin1_with_a_mark(tmp_path)
    with pytest.raises(FluxpartError, match=r"byte 0xb0 on line 2\)"):
        _read(path, rows_after_header=1)


def test_utf8_mark_before_bytes_no_declared_encoding_reads_is_refused(tmp_path):
    """A mark before bytes that neither UTF-8 nor the declared encoding reads (0x81 is
    undefined in cp1252; Python's codec (m)): refused naming both, not read."""
    path = tmp_path / "t.csv"
    path.write_bytes(b"\xef\xbb\xbf" + _text(_records()[1]).encode().replace(b"sw", b"s\x81w"))
    with pytest.raises(FluxpartError, match=r"nor cp1252 text as \[input\] encoding says"):
        _read(path, encoding="cp1252")


def _stamps():
    ends, _ = _records()
    return [f"{e:%Y-%m-%d %H:%M}" for e in ends]


def test_a_placeholder_record_before_the_record_is_dropped_noted(tmp_path):
    """A record of -9999 in every column at a stamp the next line writes with values (a
    logger that writes a placeholder at a restart), three times: read as the file without
    them, noted; before, refused as a stamp with different values."""
    _, values = _records()
    stamps = _stamps()
    (tmp_path / "clean.csv").write_text(_text(values))
    rows, written = [], []
    for i, (stamp, row) in enumerate(zip(stamps, values, strict=True)):
        if i in (40, 150, 300):
            rows.append(np.full(row.shape, -9999.0))
            written.append(stamp)
        rows.append(row)
        written.append(stamp)
    (tmp_path / "t.csv").write_text(_text(np.array(rows), stamps=written))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    assert frame.equals(_read(tmp_path / "clean.csv", missing=(-9999,))[0])
    assert any("3 record(s) holding no value" in n and "placeholder" in n
               for n in report.notes)


@pytest.mark.parametrize("other", ["a value apart", "two values"])
def test_a_repeated_stamp_with_values_in_both_is_still_refused(tmp_path, other):
    """Kept behaviour: a repeated stamp whose rows both hold values (one differing, or a
    row with a value the other lacks and one it contradicts) stays refused."""
    _, values = _records()
    stamps = _stamps()
    again = values[40].copy()
    if other == "a value apart":
        again[:] = -9999.0
        again[0] = values[40, 0] + 1.0
    else:
        again[1] += 0.5
    rows = np.vstack([values[:41], again, values[41:]])
    written = stamps[:41] + [stamps[40]] + stamps[41:]
    (tmp_path / "t.csv").write_text(_text(rows, stamps=written))
    with pytest.raises(FluxpartError, match="occurs 2 times with different values"):
        _read(tmp_path / "t.csv", missing=(-9999,))
