"""Layouts of the layouts41 round: a table compressed twice (a portal gzipping a download
already gzipped, ``.csv.gz.gz``) is read as the table; more layers than an accident makes
are refused as compressed, and an inner layer cut short as a copy cut short.

Outside facts, each named beside its check: a gzip member opens with the bytes 1F 8B
(RFC 1952, section 2.3.1), a bzip2 stream with "BZh" (bzip2 file format (m)); the
compressed bytes are made by Python's ``gzip`` and ``bz2`` modules, the general-purpose
reference. Everything else is invented known truth: the records as written.
"""

import bz2
import gzip
import io
import zipfile

import numpy as np
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE

from fluxpart.errors import InputFileError
from fluxpart.io import read_table


def _read(path):
    return read_table(path, columns=MAPPING, units={"vpd": "kPa"}, site=SITE,
                      time_column="stamp", time_format="%Y%m%d%H%M", time_marks="end")


def test_a_table_compressed_twice_is_the_table(tmp_path):
    """Refused before layouts41 ("gzip-compressed, not a text table; decompress it"),
    whatever its name; a gzip of a bzip2 file likewise, and a gzip of a zip of one table
    (refused as "a zip archive holding 1 file(s)")."""
    frame, ends = _records()
    data = frame.to_csv(index=False).encode()
    archive = io.BytesIO()
    with zipfile.ZipFile(archive, "w") as zipped:
        zipped.writestr("tower.csv", data)
    twice = gzip.compress(gzip.compress(data, mtime=0), mtime=0)
    assert twice[:2] == b"\x1f\x8b" and gzip.decompress(twice)[:2] == b"\x1f\x8b"  # RFC 1952
    for name, packed in (("t.csv.gz.gz", twice), ("t.csv.gz", twice),
                         ("t.csv", gzip.compress(bz2.compress(data), mtime=0)),
                         ("t.zip.gz", gzip.compress(archive.getvalue(), mtime=0))):
        (tmp_path / name).write_bytes(packed)
        read, _ = _read(tmp_path / name)
        assert len(read) == len(ends)
        np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy())


def test_more_layers_or_an_inner_layer_cut_short_are_refused(tmp_path):
    frame, _ = _records()
    data = frame.to_csv(index=False).encode()
    for _ in range(4):
        data = gzip.compress(data, mtime=0)
    (tmp_path / "t.csv.gz").write_bytes(data)
    with pytest.raises(InputFileError, match="gzip-compressed, not a text table"):
        _read(tmp_path / "t.csv.gz")
    inner = gzip.compress(frame.to_csv(index=False).encode(), mtime=0)
    (tmp_path / "cut.csv.gz").write_bytes(gzip.compress(inner[: len(inner) // 2], mtime=0))
    with pytest.raises(InputFileError, match="gzip-compressed but cannot be decompressed"):
        _read(tmp_path / "cut.csv.gz")


def test_a_remark_after_the_last_field_is_named_as_a_remark(tmp_path):
    """Refused before layouts41 as "a delimiter inside a value, or two records run
    together?"; a remark field after a record (common practice: "# batt low") leaves
    the record kept or dropped, as a comment in a cell does, so it stays refused, named."""
    frame, _ = _records()
    lines = frame.to_csv(index=False).splitlines()
    lines[3] += ",# batt low"
    lines[7] += ",# batt low"
    (tmp_path / "t.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(InputFileError) as caught:
        _read(tmp_path / "t.csv")
    message = str(caught.value)
    assert "line 4 has" in message and "hold a remark ('# batt low' and 1 more line(s))" \
        in message and "\n" not in message
