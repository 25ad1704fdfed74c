"""Layouts of the layouts43 round: a tar archive of one table is read as a zip of one is;
7z and RAR archives are named; a header line opened by a comment mark and header names
wrapped over two lines are read; records appended late that fill a gap exactly are named
with the fix that places them.

Outside facts, each named beside its check: tar archives are written by Python's
``tarfile`` (the general-purpose reference; POSIX ustar, "ustar" at byte 257 (m)); the
commented header by ``numpy.savetxt`` (its ``header`` written after ``comments="# "``,
NumPy documentation); the wrapped header cells by Python's ``csv`` module (RFC 4180,
section 2.6: a field holding a line break is quoted); the 7z and RAR signatures from
their format descriptions (m). Everything else is invented known truth: the records as
written.
"""

import csv
import io
import tarfile

import numpy as np
import pytest
from test_robustness_layouts35 import _records  # invented records of 1-10 June 2021
from test_robustness_layouts36 import MAPPING, SITE

from fluxpart.errors import (
    InputFileError,
    MissingColumnError,
    NonMonotonicTimestampError,
    SpacingError,
)
from fluxpart.io import read_table


def _read(path, columns=MAPPING):
    return read_table(path, columns=columns, units={"vpd": "kPa"}, site=SITE,
                      time_column="stamp", time_format="%Y%m%d%H%M", time_marks="end")


def _tar(members, mode):
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode=mode) as archive:
        for name, data in members:
            info = tarfile.TarInfo(name)
            info.size = len(data)
            archive.addfile(info, io.BytesIO(data))
    return buffer.getvalue()


@pytest.mark.parametrize("mode, name", [("w", "t.tar"), ("w:gz", "t.tar.gz"),
                                        ("w:bz2", "t.tbz")])
def test_a_tar_archive_of_one_table_is_the_table(tmp_path, mode, name):
    """Refused before: a plain tar as "zero bytes ... a power failure" (its headers'
    padding), a compressed one as an archive of files. macOS tar's "._" resource fork
    (AppleDouble) beside the table is not counted."""
    frame, _ = _records()
    data = frame.to_csv(index=False).encode()
    (tmp_path / name).write_bytes(_tar([("./._t.csv", b"\x00\x05\x16\x07" + bytes(40)),
                                        ("./t.csv", data)], mode))
    read, _ = _read(tmp_path / name)
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))


def test_a_tar_archive_of_two_tables_is_refused_naming_them(tmp_path):
    frame, _ = _records()
    data = frame.to_csv(index=False).encode()
    (tmp_path / "two.tar").write_bytes(_tar([("a.csv", data), ("b.csv", data)], "w"))
    with pytest.raises(InputFileError, match=r"is a tar archive holding 2 file\(s\) "
                       r"\('a.csv', 'b.csv'\), not a text table; unpack it"):
        _read(tmp_path / "two.tar")


@pytest.mark.parametrize("magic, kind", [(b"7z\xbc\xaf\x27\x1c\x00\x04", "a 7z archive"),
                                         (b"Rar!\x1a\x07\x01\x00", "a RAR archive")])
def test_7z_and_rar_archives_are_named(tmp_path, magic, kind):
    """Refused before as "not utf-8 text; set [input] encoding"."""
    (tmp_path / "t.bin").write_bytes(magic + bytes(100))
    with pytest.raises(InputFileError, match=f"is {kind}, not a text table; unpack it"):
        _read(tmp_path / "t.bin")


def test_a_header_written_as_a_comment_by_numpy_savetxt_is_read(tmp_path):
    """numpy.savetxt writes its header after "# "; refused before ("did you mean
    '# stamp'?")."""
    frame, _ = _records()
    np.savetxt(tmp_path / "t.csv", frame.to_numpy(), fmt="%s", delimiter=",",
               header=",".join(frame.columns))
    assert (tmp_path / "t.csv").read_text().startswith("# stamp,")
    read, report = _read(tmp_path / "t.csv")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    assert any("opens with the comment mark '#'" in w and "read without it" in w
               for w in report.notes)
    # numpy.savetxt's default delimiter, a blank: the mark a field of its own
    np.savetxt(tmp_path / "blank.txt", frame.to_numpy(), fmt="%s", header=" ".join(frame.columns))
    read, _ = read_table(tmp_path / "blank.txt", columns=MAPPING, units={"vpd": "kPa"},
                         site=SITE, time_column="stamp", time_format="%Y%m%d%H%M",
                         time_marks="end", delimiter="whitespace")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    # a setting naming the marked name keeps it
    marked, _ = read_table(tmp_path / "t.csv", columns=MAPPING, units={"vpd": "kPa"},
                           site=SITE, time_column="# stamp", time_format="%Y%m%d%H%M",
                           time_marks="end")
    assert len(marked) == len(read)


def test_header_names_wrapped_over_two_lines_are_read_with_a_blank(tmp_path):
    """A spreadsheet's wrapped header cells, saved by the csv module (RFC 4180 2.6)."""
    frame, _ = _records()
    frame = frame.astype(str)
    names = ["stamp"] + [f"{name}\n[{unit}]" for name, unit in
                         zip(frame.columns[1:], ["umol m-2 s-1", "W m-2", "degC", "kPa",
                                                 "m s-1"], strict=True)]
    frame.loc[100, "co2"] = "x"                        # record 101: line 102 + 5 breaks
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(names)
    writer.writerows(frame.to_numpy().tolist())
    (tmp_path / "t.csv").write_text(out.getvalue())
    columns = {key: f"{value} [{unit}]" for (key, value), unit in
               zip(MAPPING.items(), ["umol m-2 s-1", "W m-2", "degC", "kPa", "m s-1"],
                   strict=True)}
    with pytest.raises(InputFileError, match=r"line 107 of .*has 'x'"):
        _read(tmp_path / "t.csv", columns)
    with pytest.raises(MissingColumnError, match=r"did you mean 'co2 \[umol m-2 s-1\]'"):
        _read(tmp_path / "t.csv")
    frame.loc[100, "co2"] = "1.5"
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(names)
    writer.writerows(frame.to_numpy().tolist())
    (tmp_path / "t.csv").write_text(out.getvalue())
    read, report = _read(tmp_path / "t.csv", columns)
    assert read["nee"].iloc[100] == 1.5 and len(read) == len(frame)
    np.testing.assert_array_equal(read["rg"].to_numpy(), frame["sw"].to_numpy(float))
    assert any("5 header name(s) hold a line break" in w for w in report.notes)


def test_records_appended_late_that_fill_a_gap_are_named_with_the_sort_fix(tmp_path):
    """A day read late from the logger and appended: refused before with "sorting would
    misplace them", which is the fix here (every stamp fills the gap, none repeats).
    Since layouts47 a whole day so appended is read in time order with a note; a block
    that is no whole day keeps the named sort fix."""
    frame, _ = _records()
    lines = frame.to_csv(index=False).splitlines()
    late = lines[1 + 96:1 + 144]                       # 3 June, 48 records
    (tmp_path / "late.csv").write_text("\n".join(lines[:97] + lines[145:] + late) + "\n")
    read, report = _read(tmp_path / "late.csv")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    assert any("3 whole days or months out of time order" in n for n in report.notes)
    part = lines[1 + 100:1 + 140]                      # 40 records of 3 June
    (tmp_path / "part.csv").write_text("\n".join(lines[:101] + lines[141:] + part) + "\n")
    with pytest.raises(NonMonotonicTimestampError,
                       match=r"the 40 records from there \(2021-06-03 02:30 \.\. 2021-06-03 "
                             r"22:00\) fill the gap between 2021-06-03 02:00 and 2021-06-03 "
                             r"22:30 of the others exactly .*sort a copy"):
        _read(tmp_path / "part.csv")
    # a block one record short of its gap (a clock set back): no such fix
    (tmp_path / "reset.csv").write_text("\n".join(lines[:97] + lines[146:] + late) + "\n")
    with pytest.raises(NonMonotonicTimestampError, match="sorting would misplace them"):
        _read(tmp_path / "reset.csv")


def test_blank_lines_above_the_header_are_read_past(tmp_path):
    """Refused before with "set [input] rows_before_header = 2"; blank lines hold
    nothing. A line of text among them still needs the setting."""
    frame, _ = _records()
    text = frame.to_csv(index=False)
    (tmp_path / "blank.csv").write_text("\n \n" + text)
    read, report = _read(tmp_path / "blank.csv")
    np.testing.assert_array_equal(read["nee"].to_numpy(), frame["co2"].to_numpy(float))
    assert any("2 blank line(s) above the header (line 3) read past" in w
               for w in report.notes)
    (tmp_path / "title.csv").write_text("Quillmoor export\n\n" + text)
    with pytest.raises(MissingColumnError, match="set \\[input\\] rows_before_header = 2"):
        _read(tmp_path / "title.csv")


def test_ten_minute_records_are_refused_naming_the_flux_averaging_caution(tmp_path):
    """A mean of three 10-minute covariances lacks the longer eddies' covariance
    (Finnigan et al. 2003, Boundary-Layer Meteorology 107 (m)): the refusal said only
    "average the file"; hourly and half-hourly messages are unchanged."""
    frame, ends = _records()
    frame["stamp"] = (ends[0] + (ends - ends[0]) / 3).strftime("%Y%m%d%H%M")
    (tmp_path / "t.csv").write_text(frame.to_csv(index=False))
    with pytest.raises(SpacingError, match=r"spacing between stamps is 10 minutes.*average the "
                       r"file to 30 or 60 minutes first; the weather by its means, while the "
                       r"CO2 flux is best computed again over 30 minutes"):
        _read(tmp_path / "t.csv")
