"""Defects found by the review69 round in the session's first merges (invented data only).

Each test fails on the code before its fix. Outside facts, each named beside its check: a
spreadsheet saves a merged cell's value in its first cell only (ECMA-376 part 1,
``mergeCell`` (m)); the times of one calendar day run forwards from 00:00 (ISO 8601-1,
the time of day (m)); a Dask address is ``scheme://host:port`` with no blank (Dask
distributed documentation, "Communications" (m)). Everything else is invented known
truth: the records as written.
"""
from __future__ import annotations

import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records, 1-8 June 2021

from fluxpart import batch
from fluxpart.cli import main
from fluxpart.errors import (
    ConfigError,
    InputFileError,
    NonMonotonicTimestampError,
    TimestampError,
)


def _date_where_it_changes(path, starts, values, left_out=None, date_of=None):
    """The records with the date on the first record under each date only (`left_out`:
    a date never written; `date_of`: the date each record is filed under)."""
    date_of = starts.normalize() if date_of is None else date_of
    first = ~pd.Series(date_of).duplicated().to_numpy()
    rows = [",".join(["day", "clock"] + NAMES)]
    for s, d, f, row in zip(starts, date_of, first, values, strict=True):
        day = f"{d:%Y-%m-%d}" if f and f"{d:%Y-%m-%d}" != left_out else ""
        rows.append(",".join([day, f"{s:%H:%M}"] + [f"{v:g}" for v in row]))
    path.write_text("\n".join(rows) + "\n")


def test_a_left_out_date_after_a_half_day_is_not_filled_with_the_day_before(tmp_path):
    """1 June from noon, 2 June until 11:00 and its date never written, 3-8 June whole:
    under 1 June's date no clock repeats, but the clock turns back to 00:00 before the
    date's last record. It was filled with 1 June and refused as "every record ending at
    midnight seems dated with the day it ends", a wrong cause; now nothing is filled and
    the refusal names the date column written only where it changes, as before
    layouts48."""
    ends, values = _records()
    starts = ends - pd.Timedelta("30min")
    keep = (starts >= "2021-06-01 12:00") & ~((starts >= "2021-06-02 11:30")
                                              & (starts < "2021-06-03"))
    path = tmp_path / "sheet.csv"
    _date_where_it_changes(path, starts[keep], values[keep], left_out="2021-06-02")
    with pytest.raises(TimestampError, match=r"column 'day' is empty on .* written only "
                       r"where it changes") as caught:
        _read(path, time_column=["day", "clock"], time_marks="start")
    assert "midnight" not in str(caught.value)
    # the whole file with every date written where it changes is still filled down
    _date_where_it_changes(path, starts[keep], values[keep])
    read, report = _read(path, time_column=["day", "clock"], time_marks="start")
    assert read.index[0] == pd.Timestamp("2021-06-01 12:00") and len(read) == 360
    assert any("filled down on" in n for n in report.notes), report.notes


def test_midnight_filed_under_the_day_it_ends_keeps_its_own_refusal(tmp_path):
    """Interval ends with 00:00 under the date of the day it closes (each date's last
    record): the turn back is at a date's last record only, so the dates are filled and
    the refusal names midnight dated with the day it ends, as layouts48 left it."""
    ends, values = _records()
    path = tmp_path / "sheet.csv"
    _date_where_it_changes(path, ends, values,
                           date_of=(ends - pd.Timedelta("30min")).normalize())
    with pytest.raises(NonMonotonicTimestampError, match="midnight"):
        _read(path, time_column=["day", "clock"], time_marks="end")


def test_blanks_around_a_scheduler_address_are_not_part_of_it(tmp_path, monkeypatch):
    """``--scheduler " tcp://HOST:PORT"`` was refused as an "unknown address scheme
    ' tcp'" while a trailing blank was taken: the address is asked for without them."""
    asked = []

    def refuse(address, seconds=None):
        asked.append(address)
        raise ConfigError("stop here")

    monkeypatch.setattr(batch, "check_scheduler", refuse)
    (tmp_path / "tower.toml").write_text("[site]\n")
    sites = tmp_path / "SITES.toml"
    sites.write_text('[batch]\nsites = ["tower.toml"]\nout = "net"\n')
    for address in (" tcp://127.0.0.1:8786", "tcp://127.0.0.1:8786 \t"):
        assert main(["batch", str(sites), "--scheduler", address]) == 2
    assert asked == ["tcp://127.0.0.1:8786"] * 2
    assert not (tmp_path / "net").exists()


def _zip_of_days(path, name_of, title_of=None, days=6):
    """The records as one CSV a day (`name_of(k, day)`, k from 1), each under the header
    and, where given, a title line `title_of(day)`, in one zip."""
    import io
    import zipfile

    ends, values = _records(48 * days)
    day = (ends - pd.Timedelta("30min")).normalize()
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        for k, d in enumerate(sorted(set(day)), start=1):
            rows = ([title_of(d)] if title_of else []) + [",".join(["stamp"] + NAMES)]
            rows += [",".join([f"{e:%Y-%m-%d %H:%M}"] + [f"{v:g}" for v in row])
                     for e, row in zip(ends[day == d], values[day == d], strict=True)]
            archive.writestr(name_of(k, d), "\n".join(rows) + "\n")
    path.write_bytes(buffer.getvalue())
    return ends


def test_a_zip_of_days_numbered_without_leading_zeros_is_joined_in_their_order(tmp_path):
    """day1.csv ... day12.csv: joined in the order of the names as text (day1, day10,
    day11, day12, day2, ...) the records came out of time order (read with a note of
    three days out of order, the note naming 'day1' to 'day9'); the digits are now
    compared as numbers, so the days join in time order."""
    path = tmp_path / "card.zip"
    ends = _zip_of_days(path, lambda k, d: f"card/day{k}.csv", days=12)
    read, report = _read(path)
    assert read.index[-1] == ends[-1] - pd.Timedelta("30min") and len(read) == len(ends)
    assert any("('card/day1.csv' to 'card/day12.csv')" in n for n in report.notes), \
        report.notes
    assert not any("out of time order" in n for n in report.notes), report.notes


def test_a_zip_of_days_whose_title_line_names_the_day_names_both_lines(tmp_path):
    """A title line with each file's date above one header: refused as before (the
    files open with different lines), now showing both first lines, not "opens with
    another line ... a changed header?" of a header that is the same."""
    path = tmp_path / "card.zip"
    _zip_of_days(path, lambda k, d: f"mast_{d:%Y%m%d}.csv",
                 lambda d: f"Quillmoor mast, {d:%Y-%m-%d}")
    with pytest.raises(InputFileError, match=r"'mast_20210602.csv' opens with 'Quillmoor "
                       r"mast, 2021-06-02' where 'mast_20210601.csv' opens with 'Quillmoor "
                       r"mast, 2021-06-01'; .* a title line"):
        _read(path, rows_before_header=1)


def test_a_missing_leap_day_names_a_daily_file_left_out_beside_the_calendar():
    """A logger writing one file a day whose 29 February 2024 file was not read leaves
    exactly the trace of a calendar without leap days (one empty day between complete
    ones); the warning named the calendar alone. The Gregorian rule (Python's
    calendar.isleap, ISO 8601-1 (m)) makes 2024 a leap year."""
    import calendar

    import numpy as np

    from fluxpart.leap_day import missing_leap_day

    assert calendar.isleap(2024)
    index = pd.date_range("2024-02-01", "2024-03-31 23:30", freq="30min")
    frame = pd.DataFrame({"nee": np.random.default_rng(69).normal(1.0, 0.5, len(index))},
                         index=index)
    text = missing_leap_day(frame[frame.index.normalize() != "2024-02-29"], 30.0)
    assert "29 February 2024" in text and "2023 or 2025" in text
    assert "a logger writing a file a day whose file of 29 February was lost" in text


def test_a_day_fraction_beside_a_cell_that_is_no_whole_day_count_is_not_summed(tmp_path):
    """Under "days since 1899-12-30" a date cell written as a date ("2021-06-01") beside a
    day fraction was read as the day count "01" (its last digits: the pattern searched,
    not matched whole), the records put in 1899-12-31 to 1900-01-07 with a note of "a
    whole day count"; "44348.0" gave the day "0". Both are now no day count and the
    stamps are refused as no number of the format. Spreadsheet day numbers count from
    1899-12-30 (ECMA-376 part 1, 18.17.4 (m))."""
    ends, values = _records()
    days = (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")
    whole = (days + 1e-9).astype(int)
    path = tmp_path / "sheet.csv"
    for day_of in (lambda e, w: f"{e:%Y-%m-%d}", lambda e, w: f"{w}.0"):
        path.write_text("\n".join([",".join(["day", "clock"] + NAMES)] + [
            ",".join([day_of(e, w), f"{d - w:.6f}"] + [f"{v:g}" for v in row])
            for e, w, d, row in zip(ends, whole, days, values, strict=True)]) + "\n")
        with pytest.raises(TimestampError, match=r"which is no number of time_format"):
            _read(path, time_column=["day", "clock"], time_format="days since 1899-12-30")


def test_an_error_in_one_verify_leaves_another_verifys_scratch_folder(tmp_path, monkeypatch):
    """faults45's scratch folder removed every folder of the process's id on any
    exception, so an error in one verify (a caller verifying sites in threads) deleted
    another's scratch folder in use; a stop (KeyboardInterrupt, the command line's
    signals) still removes them all (Python's exception hierarchy: KeyboardInterrupt is no
    Exception (m))."""
    import tempfile

    from fluxpart import verify

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    with verify.scratch_folder() as other:
        with pytest.raises(ValueError), verify.scratch_folder() as mine:
            (mine / "table.parquet").write_bytes(b"x")
            raise ValueError("a rerun's error")
        assert other.is_dir() and not mine.exists()
        with pytest.raises(KeyboardInterrupt), verify.scratch_folder():
            raise KeyboardInterrupt
        assert not other.exists()
