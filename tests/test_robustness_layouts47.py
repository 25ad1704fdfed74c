"""Layouts of the layouts47 round: what a user means, read with a note where provable.

Rows sorted by another column, whole days out of order, summary lines among the records,
a group line above the header, a units row in brackets and minutes of the day beside a
date were refused before, each naming the fix (layouts45). Each is now read where the
intent is unambiguous and no record is touched, with a reader note; each has a twin that
stays refused (a clock reset beside a record counter, summary values that are not the
day's, a sort key the file does not hold, a header under the group line lacking a name).

Outside facts, each named beside its check: the arithmetic mean and sum of a day's
records, and the empty sum 0 (any statistics text); a day holds 1,440 minutes (SI); a
sort by a key puts the key in monotone order (Knuth, TAOCP vol. 3, section 5 (m));
half-hourly records make 48 a day (common practice). Everything else is invented known
truth: the records as written, read as the clean file is.
"""

import warnings

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records, 1-4 June 2021

from fluxpart.errors import (
    DuplicateTimestampError,
    NonMonotonicTimestampError,
    TimestampError,
)


def _lines(stamps, values, head="stamp", sep=","):
    return [sep.join([head] + NAMES)] + [
        sep.join([stamp] + [f"{v:g}" for v in row]) for stamp, row in zip(stamps, values,
                                                                         strict=True)]


def _clean(tmp_path):
    """The records as written and their reading (the truth of every case)."""
    ends, values = _records()
    path = tmp_path / "clean.csv"
    path.write_text("\n".join(_lines(ends.strftime("%Y-%m-%d %H:%M"), values)) + "\n")
    return ends, values, _read(path)[0]


def _same(path, expected, note, **options):
    read, report = _read(path, **options)
    pd.testing.assert_frame_equal(read, expected)
    assert any(note in text for text in report.notes), report.notes
    assert not report.warnings


def test_rows_sorted_by_a_value_column_are_read_in_time_order(tmp_path):
    """Sorted by Rg descending (ties in any order): Rg monotone in file order, every stamp
    unique, on the grid and complete; a sort by a key the file lacks stays refused, and a
    clock reset beside a record counter (monotone too) keeps its line."""
    ends, values, expected = _clean(tmp_path)
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    order = np.argsort(-values[:, 2], kind="quicksort")
    path = tmp_path / "by_rg.csv"
    path.write_text("\n".join(_lines(stamps[order], values[order])) + "\n")
    _same(path, expected, "its records are sorted by column 'sw', not by time")
    # sorted by an invented flag the file does not hold: nothing explains the order
    # (refused as in layouts45)
    hidden = np.argsort(np.random.default_rng(47).random(len(ends)) < 0.3, kind="stable")
    lines = _lines(stamps[hidden], values[hidden])
    (tmp_path / "no_key.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(NonMonotonicTimestampError, match="sort a copy of the file by time"):
        _read(tmp_path / "no_key.csv")
    # a clock reset: a week of records stamped a year early, a record number beside
    reset = list(stamps)
    reset[100:148] = pd.date_range("2020-06-01 00:30", periods=48,
                                   freq="30min").strftime("%Y-%m-%d %H:%M")
    lines = [f"{line},{k - 1 if k else 'record'}" for k, line in enumerate(
        _lines(reset, values))]
    (tmp_path / "reset.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(NonMonotonicTimestampError, match="clock reset"):
        _read(tmp_path / "reset.csv")


def _newest_day_first(ends, values):
    """The file's lines with the days pasted newest day first (each in time order), the
    stamps and the day slices (48 records a day)."""
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    days = [slice(48 * d, 48 * (d + 1)) for d in range(len(ends) // 48)]
    lines = _lines(stamps[:0], values[:0])
    for day in days[::-1]:
        lines += _lines(stamps[day], values[day])[1:]
    return lines, stamps, days


def test_whole_days_in_reverse_order_are_read_in_time_order(tmp_path):
    """Day blocks pasted newest day first, each in time order, and each newest first in
    time order of days: read; with one day left out the blocks leave a gap: refused."""
    ends, values, expected = _clean(tmp_path)
    lines, stamps, days = _newest_day_first(ends, values)
    (tmp_path / "reverse.csv").write_text("\n".join(lines) + "\n")
    _same(tmp_path / "reverse.csv", expected, f"its records are {len(days)} whole days")
    lines = _lines(stamps[:0], values[:0])
    for day in days:
        lines += _lines(stamps[day], values[day])[1:][::-1]
    (tmp_path / "each.csv").write_text("\n".join(lines) + "\n")
    _same(tmp_path / "each.csv", expected, f"its records are {len(days)} whole days")
    lines = _lines(stamps[:0], values[:0])
    for day in days[::-1][:-2] + days[:1]:
        lines += _lines(stamps[day], values[day])[1:]
    (tmp_path / "gap.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(NonMonotonicTimestampError):
        _read(tmp_path / "gap.csv")


def _with_day_lines(path, ends, values, label, statistic, shift=0, decimals=3):
    """The records, after each day's 48 a line `label(day)` holding the `statistic`
    of the records of the day `shift` days on."""
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    lines = _lines(stamps[:0], values[:0])
    count = len(ends) // 48
    for d in range(count):
        day = slice(48 * d, 48 * (d + 1))
        other = slice(48 * ((d + shift) % count), 48 * ((d + shift) % count + 1))
        lines += _lines(stamps[day], values[day])[1:]
        summed = getattr(values[other], statistic)(0)
        lines.append(",".join([label(ends[48 * d] - pd.Timedelta("30min"))]
                              + [f"{v:.{decimals}f}" for v in summed]))
    path.write_text("\n".join(lines) + "\n")


@pytest.mark.parametrize("label, statistic", [
    (lambda day: f"{day:%Y-%m-%d}", "mean"),
    (lambda day: f"{day:%d.%m.%Y}", "sum"),
    (lambda day: "daily total", "sum"),
])
def test_daily_summary_lines_that_hold_the_days_means_or_sums_are_dropped(
        tmp_path, label, statistic):
    """Each line's values the mean or the sum of the day's records above it (to the
    decimals written): dropped with a note; the same lines holding the previous day's
    values stay refused (named as summary lines)."""
    ends, values, expected = _clean(tmp_path)
    _with_day_lines(tmp_path / "daily.csv", ends, values, label, statistic)
    _same(tmp_path / "daily.csv", expected, f"hold in every value written the {statistic}")
    _with_day_lines(tmp_path / "other.csv", ends, values, label, statistic, shift=-1)
    with pytest.raises((TimestampError, NonMonotonicTimestampError,
                        DuplicateTimestampError)):
        _read(tmp_path / "other.csv")


def test_a_month_line_of_the_records_means_closing_the_file_is_dropped(tmp_path):
    ends, values, expected = _clean(tmp_path)
    lines = _lines(ends.strftime("%Y-%m-%d %H:%M"), values)
    lines.append(",".join(["2021-06"] + [f"{v:.3f}" for v in values.mean(0)]))
    (tmp_path / "month.csv").write_text("\n".join(lines) + "\n")
    _same(tmp_path / "month.csv", expected, "1 summary line(s) among the records (lines 386")


def test_a_group_line_and_a_units_row_in_brackets_are_read_past(tmp_path):
    """ "Fluxes,,Met,,," above the names and "[-],[umol/m2/s],..." under them, the
    config silent; under the group line a header lacking a mapped name stays refused."""
    ends, values, expected = _clean(tmp_path)
    lines = _lines(ends.strftime("%Y-%m-%d %H:%M"), values)
    group = ",Fluxes,,Met,,"
    units = "[-],[umol/m2/s],[m/s],[W/m2],[degC],[hPa]"
    (tmp_path / "group.csv").write_text("\n".join([group, lines[0], units] + lines[1:]) + "\n")
    read, report = _read(tmp_path / "group.csv")
    pd.testing.assert_frame_equal(read, expected)
    assert any("line 1 holds group titles above the header" in n for n in report.notes)
    assert any("line 3 under the header holds units in brackets" in n for n in report.notes)
    (tmp_path / "lacking.csv").write_text("\n".join(
        [group, lines[0].replace("vpd", "vpd_x")] + lines[1:]) + "\n")
    with pytest.raises(Exception, match="rows_before_header = 1|vpd"):
        _read(tmp_path / "lacking.csv")


def test_minutes_of_the_day_beside_a_date_are_read_as_the_clock(tmp_path):
    """ "2021-06-01" and "90" (01:30 = 90 of the day's 1,440 minutes), start stamps."""
    ends, values, expected = _clean(tmp_path)
    starts = ends - pd.Timedelta("30min")
    minutes = (starts.hour * 60 + starts.minute).astype(str)
    lines = _lines(starts.strftime("%Y-%m-%d") + "," + minutes, values, head="day,minute")
    (tmp_path / "minutes.csv").write_text("\n".join(lines) + "\n")
    _same(tmp_path / "minutes.csv", expected, "column 'minute': the time field counts the "
          "minutes of the day ('60' is 01:00)", time_column=["day", "minute"],
          time_marks="start")


def test_a_messy_file_gives_the_clean_files_tables_byte_for_byte(bundle, tmp_path):
    """The session's bundle (30 days of the example) from a file with a group line, a
    units row in brackets and its days pasted newest day first, each closed by a line of
    its means under the date alone: every result table the same bytes as from the clean
    file (the reader's frame is the same; the pipeline is deterministic)."""
    from fluxpart import FluxpartWarning
    from fluxpart.pipeline import process_site_config

    raw = pd.read_csv(bundle / "tower.csv", dtype=str, keep_default_na=False)
    ends = pd.to_datetime(raw["stamp_end"], format="%Y%m%d%H%M")
    numbers = raw.drop(columns="stamp_end").apply(pd.to_numeric).replace(-9999, np.nan)
    day = (ends - pd.Timedelta("30min")).dt.date.to_numpy()
    blocks = []
    for d, rows in raw.groupby(day, sort=True).groups.items():
        blocks.append([",".join(row) for row in raw.loc[rows].itertuples(index=False)]
                      + [f"{d:%Y-%m-%d}," + ",".join(f"{v:.4f}" for v in
                                                     numbers.loc[rows].mean())])
    group = ",Fluxes,,Met" + "," * (len(raw.columns) - 4)
    units = ",".join("[-]" for _ in raw.columns)
    text = [group, ",".join(raw.columns), units] + sum(blocks[::-1], [])
    (tmp_path / "messy.csv").write_text("\n".join(text) + "\n")
    (tmp_path / "site.toml").write_text((bundle / "site.toml").read_text().replace(
        "tower.csv", "messy.csv"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FluxpartWarning)      # the bundle's own warnings
        result = process_site_config(tmp_path / "site.toml")
    notes = " ".join(result.provenance["reader"]["notes"])
    for said in ("group titles", "units in brackets", "summary line(s)", "whole days"):
        assert said in notes
    result.write(tmp_path / "out")
    tables = sorted(path.name for path in (bundle / "out").glob("*.parquet"))
    assert len(tables) > 10
    assert [name for name in tables if (bundle / "out" / name).read_bytes()
            != (tmp_path / "out" / name).read_bytes()] == []


def test_the_digit_count_of_each_stamp_is_pandas_regex_count():
    """The summary check's digits of each stamp (one pass over the joined bytes where every
    cell is ASCII, round speed55) are those of pandas' ``str.count(r"\\d")`` (a
    general-purpose library), for both string storages, empty and missing cells and
    non-ASCII digits (Arabic-Indic three, Unicode category Nd)."""
    from fluxpart.day_summaries import _digit_counts

    rng = np.random.default_rng(55)
    alphabet = np.array(list("0123456789 -:/.Tx") + ["\u0663", "\u00e9"])
    for case in range(60):
        pool = alphabet if case % 3 == 0 else alphabet[:17]
        cells = ["".join(rng.choice(pool, size=rng.integers(0, 20)))
                 for _ in range(rng.integers(1, 40))]
        for dtype in ("str", object):
            text = pd.Series(cells, dtype=dtype)
            if case % 5 == 0:
                text.iloc[0] = np.nan
            expected = text.str.count(r"\d").to_numpy()
            counted = _digit_counts(text)
            assert counted.dtype == expected.dtype
            np.testing.assert_array_equal(counted, expected)
