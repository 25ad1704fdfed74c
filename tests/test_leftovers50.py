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
