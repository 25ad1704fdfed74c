"""Layouts of the layouts53 round: ISO 8601 stamps with a comma before the seconds'
fraction, and zip archives whose table is encrypted or packed by a method the standard
library cannot expand.

Outside facts, each named beside its check: ISO 8601 writes a fraction after a comma or a
full stop, the comma preferred (ISO 8601-1:2019, section 3.2.6 (m)); a zip member whose
general purpose bit 0 is set is encrypted and compression method 9 is Deflate64
(PKWARE APPNOTE.TXT, sections 4.4.4 and 4.4.5 (m)); Python's ``zipfile`` (the
general-purpose reference) writes the archives, refuses an encrypted member without its
password and cannot expand Deflate64. Everything else is invented known truth: the
records as written (``test_robustness_layouts26._records``, 1-4 June 2021).
"""
import io
import re
import zipfile

import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records

from fluxpart.errors import FluxpartError, TimestampError


def _text(stamps, values, quoted=False):
    quote = '"' if quoted else ""
    return "\n".join([",".join(["stamp", *NAMES])] + [
        ",".join([f"{quote}{s}{quote}"] + [f"{v:.12g}" for v in row])
        for s, row in zip(stamps, values, strict=True)]) + "\n"


def _clean(tmp_path):
    ends, values = _records()
    path = tmp_path / "clean.csv"
    path.write_text(_text([f"{e:%Y-%m-%d %H:%M}" for e in ends], values))
    return ends, values, _read(path)[0]


@pytest.mark.parametrize("written", [
    "%Y-%m-%dT%H:%M:%S,000+01:00", "%Y-%m-%dT%H:%M:%S,0Z", "%Y-%m-%dT%H:%M:%S,00",
    # read with a full stop, refused with a comma until review89: the basic format
    # (ISO 8601-1:2019, section 5.3.1.2 (m)), a space before the offset, and RFC 9557's
    # zone after the offset (read by the offset, as tests/test_robustness_layouts49.py)
    "%Y%m%dT%H%M%S,000+0100", "%Y-%m-%dT%H:%M:%S,000 +01:00",
    "%Y-%m-%dT%H:%M:%S,000+01:00[Etc/GMT-1]"])
def test_iso_stamps_with_a_comma_before_the_fraction_read_as_with_a_point(tmp_path, written):
    """"2021-06-01T00:30:00,000+01:00" (ISO 8601's preferred decimal sign) under
    "ISO8601": refused before as not matching the format; now read as the same stamps
    written with a full stop, which read as the clean file (known truth: the site keeps
    UTC+1, so the "Z" stamps are written an hour earlier)."""
    ends, values, expected = _clean(tmp_path)
    shift = pd.Timedelta("1h") if written.endswith("Z") else pd.Timedelta(0)
    for name, form in (("comma.csv", written), ("point.csv", written.replace(",", "."))):
        (tmp_path / name).write_text(_text([f"{e - shift:{form}}" for e in ends], values,
                                           quoted=True))
    comma, _ = _read(tmp_path / "comma.csv", time_format="ISO8601")
    point, _ = _read(tmp_path / "point.csv", time_format="ISO8601")
    pd.testing.assert_frame_equal(comma, point)
    pd.testing.assert_frame_equal(comma, expected)


def test_a_comma_elsewhere_in_an_iso_stamp_stays_refused(tmp_path):
    """A comma after the minutes ("00:30,5": a fraction of a minute, which the stamps'
    parser does not read) or before a date is not taken for the seconds' decimal sign."""
    ends, values, _ = _clean(tmp_path)
    (tmp_path / "minutes.csv").write_text(
        _text([f"{e:%Y-%m-%dT%H:%M},5" for e in ends], values, quoted=True))
    with pytest.raises(TimestampError, match="does not match time_format"):
        _read(tmp_path / "minutes.csv", time_format="ISO8601")


def _zip(data, method=zipfile.ZIP_STORED):
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr(zipfile.ZipInfo("tower.csv", date_time=(2021, 6, 5, 0, 0, 0)), data,
                         compress_type=method)
    return bytearray(buffer.getvalue())


def _marked(data, local_offset, central_offset, value, as_flag):
    """The zip `data` with a field of its local and central headers set to `value` (or
    `value` or-ed into it where `as_flag`): bit 0 of the flags, or the method."""
    for signature, offset in ((b"PK\x03\x04", local_offset), (b"PK\x01\x02", central_offset)):
        at = data.find(signature) + offset
        data[at] = data[at] | value if as_flag else value
    return bytes(data)


@pytest.mark.parametrize(("local", "central", "value", "as_flag", "named"), [
    (6, 8, 1, True, r"'tower.csv' are encrypted \(packed with a password\): unpack it with "
                    r"its password"),
    (8, 10, 9, False, r"'tower.csv' is compressed by Deflate64, which this reader cannot "
                      r"expand"),
])
def test_a_zip_whose_table_cannot_be_read_names_the_cause(tmp_path, local, central, value,
                                                          as_flag, named):
    """Refused before as "a zip archive holding 1 file(s) ('tower.csv'), not a text
    table; unpack it", which names no cause (the same zip unencrypted is read). Python's
    zipfile itself refuses both (the reference): a password is required, Deflate64 is
    not supported."""
    ends, values, expected = _clean(tmp_path)
    text = _text([f"{e:%Y-%m-%d %H:%M}" for e in ends], values).encode()
    path = tmp_path / "tower.zip"
    path.write_bytes(_marked(_zip(text), local, central, value, as_flag))
    with zipfile.ZipFile(path) as archive, pytest.raises((RuntimeError, NotImplementedError)):
        archive.read("tower.csv")
    with pytest.raises(FluxpartError, match=named):
        _read(path)
    path.write_bytes(bytes(_zip(text)))
    pd.testing.assert_frame_equal(_read(path)[0], expected)


@pytest.mark.parametrize("method", [zipfile.ZIP_BZIP2, zipfile.ZIP_LZMA])
def test_a_zip_packed_by_bzip2_or_lzma_is_read(tmp_path, method):
    """Methods 12 and 14, which the standard library expands: read as the clean file."""
    ends, values, expected = _clean(tmp_path)
    text = _text([f"{e:%Y-%m-%d %H:%M}" for e in ends], values).encode()
    (tmp_path / "tower.zip").write_bytes(bytes(_zip(text, method)))
    pd.testing.assert_frame_equal(_read(tmp_path / "tower.zip")[0], expected)


def test_an_encrypted_read_me_beside_the_table_is_no_cause(tmp_path):
    """A read-me packed with a password beside a plain table: the table is read, as a
    read-me beside it always was (documents are not counted)."""
    ends, values, expected = _clean(tmp_path)
    text = _text([f"{e:%Y-%m-%d %H:%M}" for e in ends], values).encode()
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr(zipfile.ZipInfo("README.txt", date_time=(2021, 6, 5, 0, 0, 0)),
                         b"Quillmoor (fictional)")
        archive.writestr(zipfile.ZipInfo("tower.csv", date_time=(2021, 6, 5, 0, 0, 0)), text)
    data = bytearray(buffer.getvalue())
    for signature, offset in ((b"PK\x03\x04", 6), (b"PK\x01\x02", 8)):
        data[data.find(signature) + offset] |= 1          # the first member: README.txt
    (tmp_path / "tower.zip").write_bytes(bytes(data))
    with zipfile.ZipFile(tmp_path / "tower.zip") as archive:
        assert [info.flag_bits & 1 for info in archive.infolist()] == [1, 0]
    pd.testing.assert_frame_equal(_read(tmp_path / "tower.zip")[0], expected)


@pytest.mark.parametrize(("entries", "named"), [
    ([], r"is an empty zip archive \(it holds no file\)"),
    ([("data/", b"")], r"is a zip archive holding folders only, no file"),
])
def test_a_zip_without_a_file_is_named_as_such(tmp_path, entries, named):
    """An empty zip is its end-of-central-directory record alone, 22 bytes starting
    "PK\\x05\\x06" (PKWARE APPNOTE.TXT, section 4.3.16 (m); Python's zipfile writes it):
    it was named "empty; expected a header line and records", and a zip of a folder
    alone "holding 0 file(s) ()" (review89)."""
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        for name, data in entries:
            archive.writestr(zipfile.ZipInfo(name, date_time=(2021, 6, 5, 0, 0, 0)), data)
    path = tmp_path / "tower.zip"
    path.write_bytes(buffer.getvalue())
    if not entries:
        assert len(buffer.getvalue()) == 22 and buffer.getvalue()[:4] == b"PK\x05\x06"
    with pytest.raises(FluxpartError, match=named) as caught:
        _read(path)
    assert "empty; expected a header" not in str(caught.value)
    assert "0 file(s)" not in str(caught.value)


@pytest.mark.parametrize("written", ["%Y-%m-%dT%H:%M:%S,000+01:00", "%Y-%m-%d %H:%M:%S,5"])
def test_an_unquoted_comma_fraction_in_a_comma_file_is_named(tmp_path, written):
    """Unquoted in a comma-delimited file the stamp "2021-06-01T00:30:00,000+01:00" is two
    fields (RFC 4180, section 2, rule 6 (m): a field holding the delimiter is quoted); the
    refusal named only the count of fields (review89). It now names the stamp and the
    fix; the same file with its stamps quoted is read (the test above)."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "unquoted.csv"
    path.write_text(_text([f"{e:{written}}" for e in ends], values))
    stamp = f"{ends[0]:{written}}"
    with pytest.raises(FluxpartError, match=rf"line 2 has 7 fields where the header has 6, "
                       rf"and its stamp '{re.escape(stamp)}' writes the seconds' fraction "
                       r"after a comma \(ISO 8601's decimal comma\) that is not quoted"):
        _read(path, time_format="ISO8601")


def test_an_extra_field_beside_a_whole_stamp_keeps_its_message(tmp_path):
    """A line of one field more after a whole stamp: where the extra field cannot be a
    fraction (-7.5) the header's missing name is asked for, as before; where it can (7,
    digits alone) both causes are named, as no reading can tell them apart."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "extra.csv"
    path.write_text(_text([f"{e:%Y-%m-%dT%H:%M:%S},-7.5" for e in ends], values))
    with pytest.raises(FluxpartError, match="Is a column name missing") as caught:
        _read(path, time_format="ISO8601")
    assert "decimal comma" not in str(caught.value)
    path.write_text(_text([f"{e:%Y-%m-%dT%H:%M:%S},7" for e in ends], values))
    with pytest.raises(FluxpartError, match=r"decimal comma\) that is not quoted.*or, if the "
                       "stamps are whole, is a column name missing in the header"):
        _read(path, time_format="ISO8601")
