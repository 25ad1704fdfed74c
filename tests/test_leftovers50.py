"""Leftovers of session 49 (round leftovers50): a large file of records finer than 30
minutes refused from samples before the whole file is parsed; a decimal day of the year
counted from 0 told from one counted from 1; ``diff`` of folders whose tables differ
within rounding only.

Outside facts, each named beside its check: a year of half-hourly records holds
365 x 48 = 17,520 records (fact of the trade); ``%j`` counts the day of the year from
001 (Python documentation, ``datetime.strptime`` (m)); 2024 is a leap year and 2021 is
not (Gregorian calendar; Python's ``calendar.isleap``, a general-purpose reference).
The records are invented known truth (1-10 June 2021, half-hourly, and their 1-minute
and day-of-year versions).
"""
import pandas as pd
import pytest
from test_robustness_layouts35 import _read, _records  # invented records of June 2021
from test_robustness_layouts40 import _read as _read_as

from fluxpart import io
from fluxpart.errors import SpacingError


def test_a_large_file_of_finer_records_is_refused_from_samples_before_it_is_parsed(
        tmp_path, monkeypatch):
    """Ten years of 1-minute records (5.3 million lines) were refused for their spacing
    only after a parse of 37-82 s and 2.6 GB (faults39); a file past SAMPLED_LINES lines
    whose first, middle and last lines step by under 30 minutes, and which holds more
    than twice the lines 30-minute records of its span take, is refused from those
    samples. Lowered here to 1,000 lines so that the test is fast."""
    monkeypatch.setattr(io, "SAMPLED_LINES", 1000)
    frame, _ = _records(3000)
    minutes = frame.assign(stamp=pd.date_range("2021-06-01 00:01", periods=3000,
                                               freq="1min").strftime("%Y%m%d%H%M"))
    path = tmp_path / "minutes.csv"
    minutes.to_csv(path, index=False)
    with pytest.raises(SpacingError, match=r"\(0 MB, 3,001 lines\) holds records 1 "
                       r"minute\(s\) apart .* refused before it is parsed whole: a year of "
                       r"half-hourly records takes 17,520 lines"):
        _read(path)
    # a half-hourly file past the limit is read whole; one whose first 300 records are
    # 1-minute and the rest half-hourly is left to the full parse, which names its lines
    frame.to_csv(path, index=False)
    read, _ = _read(path)
    assert len(read) == 3000
    mixed = pd.concat([minutes.iloc[:300], frame.iloc[10:]])
    mixed.to_csv(path, index=False)
    with pytest.raises(SpacingError) as refused:
        _read(path)
    assert "refused before it is parsed whole" not in str(refused.value)


def test_tables_that_differ_within_rounding_only_diff_as_equal_within_rounding(
        pristine_bundle, tmp_path):
    """Two folders whose only differences are table hashes from values within rounding
    (as another CPU gives: ``numpy.nextafter`` moves a value to the adjacent double, IEEE
    754) said "differ: 2 recorded item(s)", exit 1, where ``verify`` says "reproduced
    within floating-point rounding", exit 0 (README's exit statuses). Now exit 0 with
    "equal within rounding", the hashes still listed; a change beyond rounding differs."""
    import shutil

    import numpy as np
    from test_verify import _set_value

    from fluxpart.diff import diff_folders

    first = pristine_bundle / "out"                 # the session's bundle, not edited
    second = tmp_path / "b"
    shutil.copytree(first, second)
    _set_value(second, "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))
    _set_value(second, "monthly", "nee", lambda v: float(np.nextafter(v, -np.inf)))
    report = diff_folders(first, second)
    assert [(section, name.split()[0]) for section, name, _, _ in report.items] == [
        ("table", "daily"), ("table", "monthly")]
    assert report.exit_code == 0                  # command_diff's exit status
    out = report.format()
    assert "equal within rounding:" in out and "2 table(s) differ in bytes, their values only within rounding" in out
    assert "daily values within rounding (largest relative difference" in out
    assert "differ:" not in out
    # the hashes are still listed, as before
    hashes = [(a, b) for _, _, a, b in report.items]
    assert all(len(a) == len(b) == 16 and a != b for a, b in hashes)
    _set_value(second, "daily", "nee", lambda v: v * 1.001)     # beyond rounding
    report = diff_folders(first, second)
    assert report.exit_code == 1
    assert "differ: 2 recorded item(s)" in report.format()
    assert ("table", "daily values") in [(s, n) for s, n, _, _ in report.items]


def _day_stamps(origin, start, end):
    """Year and decimal day of the year (five decimals) of the half-hourly interval ends
    from `start` to `end`, counted from `origin` (1: as %j; 0: 0.0 is 1 January 00:00),
    each in the year its interval began; and the interval starts they state."""
    ends = pd.date_range(start, end, freq="30min")
    begins = ends - pd.Timedelta("30min")
    new_year = pd.to_datetime(begins.year.astype(str) + "-01-01")
    days = (ends - new_year) / pd.Timedelta(days=1) + origin
    return pd.Series([f"{y} {d:.5f}" for y, d in zip(begins.year, days, strict=True)]), begins


@pytest.mark.parametrize("origin, start, end, said", [
    (0, "2021-01-01 00:30", "2021-01-03 00:00", "counts from 0"),   # day 0.02083: from 0
    (0, "2024-12-30 00:30", "2025-01-02 00:00", "counts from 0"),   # across the new year
    (1, "2021-12-30 00:30", "2022-01-01 00:00", None),               # 365.5 of 2021: from 1
    (1, "2024-12-31 00:30", "2025-01-01 00:00", None),               # 366.5 of 2024: from 1
])
def test_a_decimal_day_of_the_year_is_read_from_the_count_its_values_show(
        origin, start, end, said):
    """A day below 1 only a count from 0 writes; a day past 365.0 of a common year (366.0
    of a leap year), the midnight ending it, only a count from 1. Read so: a count from
    0 read as %j put every record a day early without a word (or was refused at day 0)
    before leftovers50."""
    from test_robustness_layouts40 import _parse

    text, begins = _day_stamps(origin, start, end)
    parsed = _parse(text, "%Y %j", ("yr", "doy"))
    assert (parsed.stamps - pd.Timedelta("30min")).equals(pd.DatetimeIndex(begins)
                                                          .as_unit(parsed.stamps.unit))
    assert [said in note for note in parsed.notes] == ([True] if said else [])


def test_a_decimal_day_of_the_year_both_counts_fit_is_named_with_the_settings(tmp_path):
    """March to November: no day below 1 and none past the year's last, so the values
    fit a count from 1 and one from 0 alike. Read as %j counts (from 1) with one warning
    naming the settings that decide it; "days since <year>-01-01" on the day column reads
    a count from 0 (CF conventions' form of a time coordinate's units (m)), and "days
    since <year before>-12-31" a count from 1, each silently."""
    frame, _ = _records(48 * 3)
    text, begins = _day_stamps(0, "2021-03-01 00:30", "2021-03-04 00:00")
    frame = frame.drop(columns="stamp")
    frame.insert(0, "doy", text.str.split().str[1])
    frame.insert(0, "yr", 2021)
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    read, report = _read_as(path, time_column=["yr", "doy"], time_format="%Y %j")
    said = [w for w in report.warnings if "day of the year" in w]
    assert len(said) == 1 and "both write: read as counted from 1" in said[0]
    assert "time_column = 'doy' and time_format = \"days since 2021-01-01\"" in said[0]
    assert read.index[0] == begins[0] - pd.Timedelta(days=1)         # as %j: a day early
    for setting, shift in (("days since 2021-01-01", 0), ("days since 2020-12-31", -1)):
        read, report = _read_as(path, time_column="doy", time_format=setting)
        assert read.index[0] == begins[0] + pd.Timedelta(days=shift)
        assert not [w for w in report.warnings if "day of the year" in w]


def test_the_samples_are_the_first_middle_and_last_lines_of_the_records(monkeypatch):
    """`io._sample_blocks` finds its three samples by positions in the file's text, without
    a copy of it (round speed57): they must be the blocks of the records' part cut as
    ``str.find`` and ``str.rfind`` cut a copy of it (the text after the head lines, its
    final line ends stripped; the Python documentation of str (m)), for random texts,
    head lines and sample lengths."""
    import numpy as np

    def copied(text, head_lines, size):
        start = 0
        for _ in range(head_lines):
            start = text.find("\n", start) + 1
            if not start:
                return None
        body = text[start:].rstrip("\n")

        def lines_from(at):
            end = at
            for _ in range(size):
                end = body.find("\n", end) + 1
                if not end:
                    return body[at:]
            return body[at:end]

        middle = body.find("\n", len(body) // 2) + 1
        last = len(body)
        for _ in range(size):
            last = body.rfind("\n", 0, last)
            if last < 0:
                break
        return text[:start], [lines_from(0), lines_from(middle), body[last + 1:]]

    rng = np.random.default_rng(57)
    pieces = np.array(["a", "b,c", "\n", "\n\n", "1", "\r\n"])
    for size in rng.integers(0, 60, 600):
        text = "".join(rng.choice(pieces, size))
        for head_lines in range(3):
            for lines in (1, 2, 5):
                monkeypatch.setattr(io, "_SAMPLE_LINES", lines)
                assert io._sample_blocks(text, head_lines) == copied(text, head_lines, lines), (
                    text, head_lines, lines)
