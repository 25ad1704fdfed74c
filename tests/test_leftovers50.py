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
