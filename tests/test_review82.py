"""Fresh-eyes review of rounds newuser55 and layouts52 (round review82).

Outside facts, each named beside its check: a CSV line ends at CRLF, LF or (classic Mac
OS) a CR alone, and Python's ``csv`` module reads each as a line end (Python docs,
``csv`` module, "newline" (m)); a tar member held twice is unpacked as its last copy
(Python's ``tarfile``: "its last occurrence is assumed to be the most up-to-date
version", the general-purpose reference); Unix time counts seconds from 1970-01-01,
classic Mac OS and LabVIEW time from 1904-01-01 (POSIX.1; (m)), checked with Python's
``datetime``; no eddy-covariance tower measured CO2 fluxes before the 1970s (Desjardins
1974 (m)); a common year has 365 days of 48 half-hours (a fact of the calendar).
Everything else is invented known truth: the records as written.
"""
import csv
import io
import tarfile
from datetime import datetime

import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.counted_time import (
    FUTURE_MARGIN,
    RELEASED,
    latest_record,
    reference_mismatch,
)
from fluxpart.errors import FluxpartError
from fluxpart.formula_cells import without_text_formulas
from fluxpart.io import read_table


def test_text_formula_cells_of_a_file_of_cr_line_ends_are_all_read():
    """A CR-only file kept the "=" on each line's first and last cells (the pattern knew
    LF only): its flag column was not found, named '="qc_co2"'."""
    rows = [["stamp", "nee", "flag"], ["202101010030", "0.329", "0"],
            ["202101010100", "-9999", "1"]]
    for ending in ("\r", "\n", "\r\n"):
        text = ending.join(",".join(f'="{cell}"' for cell in row) for row in rows) + ending
        found, lines = without_text_formulas(text)
        assert list(csv.reader(io.StringIO(found, newline=""))) == rows, repr(ending)
        assert lines == 3, repr(ending)


def test_a_text_formula_cell_inside_a_quoted_field_is_left_alone():
    """RFC 4180 doubles a quote inside a quoted field: '="x"' written in a note is
    '=""x""' there, no whole field, and stays as written (m)."""
    text = 'a,note\r"1","cell =""x"", kept"\r'
    assert without_text_formulas(text) == (text, 0)


def _tar(members):
    buffer = io.BytesIO()
    with tarfile.open(fileobj=buffer, mode="w") as archive:
        for name, data in members:
            info = tarfile.TarInfo(name)
            info.size = len(data)
            archive.addfile(info, io.BytesIO(data))
    return buffer.getvalue()


def test_a_tar_holding_one_name_twice_reads_its_last_copy(tmp_path):
    """A file added again to its tar after the logger wrote on (``tar -r``): unpacking
    leaves the last copy. Both copies were read one after another as a series of two
    tables; here the later copy also corrects values, which made every stamp of the
    first a repeated stamp with other values."""
    _, records = _tower()
    first = records.iloc[:200].assign(co2_flux=records["co2_flux"].iloc[:200] + 1.0)
    data = _tar([("tower.csv", first.to_csv(index=False).encode()),
                 ("tower.csv", records.to_csv(index=False).encode())])
    with tarfile.open(fileobj=io.BytesIO(data)) as archive:   # the reference's reading
        assert archive.extractfile("tower.csv").read() == records.to_csv(index=False).encode()
    (tmp_path / "t.tar").write_bytes(data)
    (tmp_path / "clean.csv").write_text(records.to_csv(index=False))
    frame, report = _read(tmp_path / "t.tar")
    pd.testing.assert_frame_equal(frame, _read(tmp_path / "clean.csv")[0])
    assert not any("tar archive of" in note for note in report.notes)


def _unix(year):
    return int((datetime(year, 1, 1) - datetime(1970, 1, 1)).total_seconds())


def test_the_latest_record_follows_the_clock_never_before_the_release():
    """A record may be dated at most ten years past the present; a machine clock at 1970
    (a logger PC without its battery) counts as the release's date."""
    assert latest_record(0.0) == RELEASED + FUTURE_MARGIN
    later = float(_unix(2040))
    assert latest_record(later) == pd.Timestamp("2040-01-01") + FUTURE_MARGIN
    # the margin stays below the shortest shift of a known wrong reference, 66 years,
    # less the age of the oldest long-term records (1990) at the release: 30 years
    assert pd.Timedelta(days=365) <= FUTURE_MARGIN < pd.Timestamp("2056-01-01") - RELEASED


def test_records_of_1995_counted_from_1904_and_read_as_unix_time_are_refused():
    """Seconds since 1904-01-01 of 1995 read as Unix time land in 2061, before the fixed
    2077 bound, and were read without a word; past the present and ten years they are
    refused, naming the reference that places them (the present: the release's date)."""
    since_1904 = int((datetime(1995, 6, 1) - datetime(1904, 1, 1)).total_seconds())
    text = pd.Series([str(since_1904 + 1800 * i) for i in range(48)])
    said = reference_mismatch(text, "seconds since 1970-01-01 00:00:00 UTC",
                              latest=latest_record(0.0))
    assert said.startswith("counted from 1970-01-01 the records run from 2061-06-0")
    assert "a tower records no future" in said
    assert "from 1904-01-01 they run from 1995-06-01 to 1995-06-01" in said


def test_unix_time_read_as_seconds_since_1904_is_refused_as_before_any_tower():
    """Unix time of 2021 under "seconds since 1904-01-01" lands in 1955 and was read
    without a word; the counts of 2021 from their own reference pass."""
    text = pd.Series([str(_unix(2021) + 1800 * i) for i in range(48)])
    said = reference_mismatch(text, "seconds since 1904-01-01 00:00 UTC")
    assert said.startswith("counted from 1904-01-01 the records run from 1955-01-01")
    assert "before 1970: no eddy-covariance tower measured then" in said
    assert "from 1970-01-01 they run from 2021-01-01 to 2021-01-01" in said
    assert 'time_format = "seconds since 1970-01-01 00:00 UTC"' in said
    assert reference_mismatch(text, "seconds since 1970-01-01 00:00 UTC") == ""


def test_unix_time_under_seconds_since_1904_is_refused_by_the_reader(tmp_path):
    """The reader's refusal: one error naming the setting that places the records."""
    _, records = _tower()
    stamps = pd.to_datetime(records["stamp"])
    unix = ((stamps - datetime(1970, 1, 1)) / pd.Timedelta("1s")).astype("int64")
    (tmp_path / "unix.csv").write_text(records.assign(stamp=unix).to_csv(index=False))
    with pytest.raises(FluxpartError, match=r"before 1970: .*from 1970-01-01 they run "
                       r"from 2021-06-01"):
        read_table(tmp_path / "unix.csv", columns=MAPPING, time_column="stamp",
                   time_format="seconds since 1904-01-01 00:00", time_marks="end")


def test_a_partial_budget_year_of_a_few_days_is_said_in_days():
    """`check` said "(0.0 months)" of a budget year holding two days of a year of records
    and two days; `run` says such a year in days."""
    from fluxpart.preflight import _partial_budget_years
    index = pd.date_range("2023-01-01", periods=17520 + 96, freq="30min")
    texts = _partial_budget_years(index, 30, "01-01")
    assert texts == ['2024 (2024-01-01 to 2024-12-31) holds 96 of 17568 records (2.0 days): '
                     'its sums are partial and are not annual totals (year_start = "01-01"; '
                     'run warns of it too)']
