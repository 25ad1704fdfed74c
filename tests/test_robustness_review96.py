"""Fresh-eyes review of rounds layouts55 and faults49 (round review96): what a user's files
and stops did to the new reader rules and guards.

Outside facts, each named beside its check: -6999, -999.9 and 9999 are loggers' and data
centres' missing-data codes (common practice); air temperatures below -60 °C are measured
on the polar plateaus (-89.2 °C at Vostok, 1983; WMO archive (m)) and reached through the
readings above them; global radiation above the plausible 1500 W m-2 occurs for minutes at
the edges of clouds (cloud enhancement, common practice); a sonic's u* written a little
below 0 and a VPD a little below 0 in fog are readings (common practice). The zip format is
read and written by Python's ``zipfile`` (the general-purpose reference; PKWARE APPNOTE
(m)). Everything else is invented known truth: the records as written
(``test_robustness_layouts26._records``, 1-4 June 2021).
"""
import hashlib
import zipfile

import numpy as np
import pytest
from test_robustness_layouts26 import _read, _records  # invented records
from test_robustness_layouts55 import _text

from fluxpart.unit_checks import undeclared_code_cells

# column of each variable in _records: nee, ustar, rg, tair, vpd
_COLUMN = {"ustar": 1, "rg": 2, "tair": 3, "vpd": 4}


@pytest.mark.parametrize(("name", "written"), [
    ("tair", [-59.8, -60.1, -60.1, -60.1, -60.2, -59.9]),   # a cold snap, 0.1 K steps
    ("rg", [1490, 1503, 1503, 1503, 1506, 1495]),          # a cloud's edge, whole W m-2
    ("ustar", [-0.01, -0.01, -0.01, -0.01, 0.01, 0.02]),   # a sonic's floor
    ("vpd", [-1.1, -1.1, -1.1, -1.1, 0.1, 0.2]),           # fog over a humid sensor
])
def test_a_real_extreme_repeated_just_beyond_the_range_is_kept_as_a_reading(tmp_path, name,
                                                                            written):
    """A value beyond the plausible range written three or four times among neighbours
    just inside it is a reading, not a code: before (layouts55), -60.1 °C written three
    times was read as missing, "an undeclared missing-data code"; now it is kept and
    range-warned (screening rejects it), and no hint calls it a code."""
    _, values = _records()
    cells = list(range(100, 106))
    values[cells, _COLUMN[name]] = written
    (tmp_path / "t.csv").write_text(_text(values))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    np.testing.assert_allclose(frame[name].iloc[cells], written)
    assert not any("read as missing" in w or "alone occurs" in w for w in report.warnings)
    assert any(w.startswith(f"{name}: ") and "outside the plausible range" in w
               for w in report.warnings)


@pytest.mark.parametrize(("name", "code"), [("tair", -999.9), ("rg", -999.9), ("rg", 9999),
                                            ("tair", 6999), ("vpd", -99.9),
                                            ("rg", -99)])
def test_a_code_far_from_every_reading_is_still_read_as_missing(tmp_path, name, code):
    """Kept behaviour of layouts55: a code written in six cells, -9999 declared, read as
    missing and named with its count, even beside a real extreme kept as a reading."""
    _, values = _records()
    values[100:106, _COLUMN[name]] = code
    (tmp_path / "t.csv").write_text(_text(values))
    frame, report = _read(tmp_path / "t.csv", missing=(-9999,))
    assert frame[name].iloc[100:106].isna().all()
    assert frame[name].notna().sum() == len(frame) - 6
    assert any(w.startswith(f"{name}: the value {code:g} alone occurs 6 times")
               for w in report.warnings)


def test_a_code_beside_a_more_repeated_real_extreme_is_found():
    """The code is looked for among values standing apart from every reading: -60.1 °C
    four times (a cold snap) does not hide -6999 written three times."""
    readings = np.r_[np.linspace(-59.0, 20.0, 200), [-60.1] * 4, [-6999.0] * 3]
    cells, code, count = undeclared_code_cells("tair", readings, readings)
    assert (code, count) == (-6999.0, 3)
    assert cells.sum() == 3 and (readings[cells] == -6999).all()


def _flagged_lines(stamps, values, flags):
    head = "stamp,co2_flux,us,sw,t_air,vpd,qc"
    return [head] + [",".join([s] + ([f"{v:.12g}" for v in row] if row is not None
                                     else [""] * 5) + [str(flag)])
                     for s, row, flag in zip(stamps, values, flags, strict=True)]


def _read_flagged(paths):
    from test_robustness_layouts26 import MAPPING
    return _read(paths, columns=MAPPING | {"nee_flag": "qc"}, missing=(-9999,))


def test_a_placeholder_flagged_otherwise_than_its_record_is_dropped(tmp_path):
    """A logger's placeholder of no value flagged 2 ("no data") before the record of its
    stamp flagged 0: before (layouts55: flags had to agree) refused as a stamp with
    different values, the message naming a change of stamping convention; now dropped,
    noted with the differing flag, the record's own flag kept."""
    ends, values = _records()
    stamps = [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    rows, flags = list(values), [0] * len(values)
    (tmp_path / "clean.csv").write_text("\n".join(_flagged_lines(stamps, rows, flags)) + "\n")
    lines = _flagged_lines(stamps, rows, flags)
    lines.insert(51, _flagged_lines([stamps[50]], [None], [2])[1])
    (tmp_path / "t.csv").write_text("\n".join(lines) + "\n")
    frame, report = _read_flagged(tmp_path / "t.csv")
    assert frame.equals(_read_flagged(tmp_path / "clean.csv")[0])
    assert any("a placeholder, dropped" in n and "1 of them flagged otherwise than the "
               "record (line 52)" in n for n in report.notes)


def test_a_placeholder_closing_one_file_of_a_series_flagged_otherwise_is_dropped(tmp_path):
    """The first file of a series ends with a placeholder of no value flagged 2 at the
    stamp the second file begins with, flagged 0: before, refused as overlapping files
    that disagree in nee_flag (the message offering a change of time marks at midnight);
    now read as the one clean file, noted."""
    ends, values = _records()
    stamps = [f"{e:%Y-%m-%d %H:%M}" for e in ends]
    flags = [0] * len(values)
    (tmp_path / "clean.csv").write_text(
        "\n".join(_flagged_lines(stamps, list(values), flags)) + "\n")
    first = _flagged_lines(stamps[:191] + [stamps[191]], list(values[:191]) + [None],
                           [0] * 191 + [2])
    second = _flagged_lines(stamps[191:], list(values[191:]), flags[191:])
    (tmp_path / "a.csv").write_text("\n".join(first) + "\n")
    (tmp_path / "b.csv").write_text("\n".join(second) + "\n")
    frame, report = _read_flagged([tmp_path / "a.csv", tmp_path / "b.csv"])
    assert frame.equals(_read_flagged(tmp_path / "clean.csv")[0])
    assert any(n.startswith("1 record(s) holding no value") and "line 193 of" in n
               for n in report.notes)
    assert report.records_read == report.records + report.merged_rows  # 385 = 384 + 1


_TEXT = b"stamp,nee\n202101010030,1.5\n202101010100,-2.25\n"


@pytest.mark.parametrize("member", ["tower_2021.csv", "data\\tower.csv", "data/tower.csv",
                                    "a/..", "."])
def test_a_zip_beside_the_input_holding_its_bytes_under_any_name_is_taken(tmp_path, member):
    """The recorded SHA-256 decides, not the name inside the zip: before, a zip of
    "tower_2021.csv" or of a Windows tool's "data\\tower.csv" (a backslash, against the
    zip format's "/" (PKWARE APPNOTE 4.4.17 (m))) beside the gone "tower.csv" was not
    opened and then said not to hold its bytes, and a crafted name ("..", ".") stopped
    verify with a traceback (IsADirectoryError)."""
    from fluxpart.verify_restore import _packed_beside

    sha = hashlib.sha256(_TEXT).hexdigest()
    with zipfile.ZipFile(tmp_path / "tower.csv.zip", "w") as packed:
        packed.writestr(member, _TEXT)
    archive, restored = _packed_beside(tmp_path / "tower.csv", sha, tmp_path / "s", 0)
    assert archive.name == "tower.csv.zip" and restored.read_bytes() == _TEXT
    assert restored.name not in ("", ".", "..") and "\\" not in restored.name


def test_a_zip_of_other_bytes_writes_nothing(tmp_path):
    """A zip's file is hashed before anything is written (a zip unpacking to gigabytes
    was written whole to the scratch folder first; 600 MiB of zeros: 4.7 -> 1.8 s on a
    loaded machine); one of other bytes leaves the scratch folder empty."""
    from fluxpart.verify_restore import _packed_beside

    sha = hashlib.sha256(_TEXT).hexdigest()
    with zipfile.ZipFile(tmp_path / "tower.csv.zip", "w", zipfile.ZIP_DEFLATED) as packed:
        packed.writestr("tower.csv", b"\0" * (1 << 20))
    scratch = tmp_path / "s"
    scratch.mkdir()
    assert _packed_beside(tmp_path / "tower.csv", sha, scratch, 0) is None
    assert list(scratch.iterdir()) == []


def test_a_zip_of_the_input_among_other_files_is_taken_else_named(tmp_path):
    """``tower.zip`` holding the input with its config, or the folder holding both: the
    file of the input's name is taken by its SHA-256 (before: not opened, "does not hold
    its recorded bytes"); a zip of several files none of that name is named as such, not
    said to hold other bytes."""
    from fluxpart.verify_restore import _packed_beside, _packed_not_taken

    sha = hashlib.sha256(_TEXT).hexdigest()
    for folder in ("", "tower/"):
        with zipfile.ZipFile(tmp_path / "tower.zip", "w") as packed:
            packed.writestr(folder + "tower.toml", b"[site]\n")
            packed.writestr(folder + "tower.csv", _TEXT)
        archive, restored = _packed_beside(tmp_path / "tower.csv", sha, tmp_path / "s", 0)
        assert archive.name == "tower.zip" and restored.read_bytes() == _TEXT
    with zipfile.ZipFile(tmp_path / "tower.zip", "w") as packed:
        packed.writestr("a.csv", _TEXT)
        packed.writestr("b.csv", _TEXT)
    assert _packed_beside(tmp_path / "tower.csv", sha, tmp_path / "s2", 0) is None
    said = _packed_not_taken(tmp_path / "tower.csv")
    assert said == "; 'tower.zip' beside it holds 2 files, none named 'tower.csv'"
    (tmp_path / "tower.zip").write_bytes(b"PK\x03\x04 damaged")
    assert "'tower.zip' beside it does not hold its recorded bytes" in _packed_not_taken(
        tmp_path / "tower.csv")


@pytest.mark.parametrize("declared", [None, "utf-16"])
def test_a_false_utf8_mark_under_no_single_byte_encoding_is_named_in_words(tmp_path,
                                                                          declared):
    """A UTF-8 byte-order mark (EF BB BF, Unicode Standard section 23.8 (m)) before
    Latin-1 bytes ("°" as B0, ISO/IEC 8859-1 (m)), no single-byte encoding declared: still
    refused with the encoding to set, but said in words; before, "is not utf-8-sig text",
    Python's codec name."""
    import codecs

    from test_robustness_layouts26 import MAPPING

    from fluxpart.errors import FluxpartError

    _, values = _records()
    text = _text(values).replace("t_air", "t_air_°C")
    (tmp_path / "t.csv").write_bytes(codecs.BOM_UTF8 + text.encode("latin-1"))
    options = {"encoding": declared} if declared else {}
    with pytest.raises(FluxpartError) as refused:
        _read(tmp_path / "t.csv", columns=MAPPING | {"tair": "t_air_°C"}, **options)
    message = str(refused.value)
    assert "begins with a UTF-8 byte-order mark but is not UTF-8 text (byte 0xb0" in message
    assert "utf-8-sig" not in message and 'set [input] encoding = "latin-1"' in message


def test_verify_input_given_as_a_zip_of_several_files_is_tried_by_each(tmp_path):
    """``verify --input tower.zip`` where the zip holds the input with its config: the
    file with the recorded SHA-256 is taken (before: "NOT reproduced ... it is not the
    input file the result was computed from", a false claim); a zip of other files is
    still no copy."""
    from fluxpart.verify_restore import _restored_text

    sha = hashlib.sha256(_TEXT).hexdigest()
    with zipfile.ZipFile(tmp_path / "tower.zip", "w") as packed:
        packed.writestr("site/tower.toml", b"[site]\n")
        packed.writestr("site/tower.csv", _TEXT.replace(b"\n", b"\r\n"))   # re-saved too
    restored = _restored_text(tmp_path / "tower.zip", sha, tmp_path / "s", 0)
    assert restored is not None and restored.read_bytes() == _TEXT
    with zipfile.ZipFile(tmp_path / "other.zip", "w") as packed:
        packed.writestr("a.toml", b"[site]\n")
        packed.writestr("b.csv", _TEXT + b"202101010130,0.5\n")
    assert _restored_text(tmp_path / "other.zip", sha, tmp_path / "s2", 0) is None


def test_a_frozen_soil_held_at_its_melting_point_is_no_code():
    """A tundra soil held at 0 °C through a long winter (the zero curtain: the latent heat
    of its water holds it at the melting point, common practice), written in kelvin and
    kept as declared "°C" through [input] accept_units: every value lies beyond the range
    and 273.15 makes up over half of them. Before, it was taken for a code and blanked;
    now it stands among readings 0.01 K apart and stays."""
    rng = np.random.default_rng(96)
    thawed = 273.15 + rng.uniform(0.01, 12.0, 4000).round(2)
    soil = np.r_[np.full(6000, 273.15), thawed]
    assert undeclared_code_cells("tsoil", soil, soil) is None
