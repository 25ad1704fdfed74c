"""A caller's frame without a usable index of stamps, named with the fix (round mistakes37).

Known-truth recovery on invented data: each index is built from a regular 30-minute
record by the mistake named, so the cause is known. Outside facts: in the European Union
clocks go back from 03:00 summer time to 02:00 on the last Sunday of October (Directive
2000/84/EC (m)), in the United States from 02:00 to 01:00 on the first Sunday of November
(Energy Policy Act of 2005 (m)); the pandas calls named (``set_index``, ``sort_index``,
``Index.duplicated``, ``to_datetime``) are those of the pandas documentation (m).
"""
import numpy as np
import pandas as pd
import pytest

from fluxpart.canonical_frame import prepare, validate
from fluxpart.errors import SpacingError
from fluxpart.frame_stamps import index_hint, order_hint
from fluxpart.site import Site

SITE = Site("Invented meadow (fictional)", 49.3, 10.2, 1.0, "short")


def _frame(days=3, freq="30min", start="2021-10-29"):
    stamps = pd.date_range(start, periods=days * 48 * 30 // int(freq[:2]), freq=freq,
                           name="time")
    rng = np.random.default_rng(0)
    return pd.DataFrame({"nee": rng.normal(0.0, 3.0, stamps.size),
                         "rg": rng.uniform(0.0, 600.0, stamps.size),
                         "tair": rng.normal(10.0, 3.0, stamps.size),
                         "vpd": rng.uniform(0.0, 10.0, stamps.size),
                         "ustar": rng.uniform(0.05, 0.6, stamps.size)}, index=stamps)


def _refusal(frame) -> str:
    with pytest.raises(SpacingError) as caught:
        validate(prepare(frame, SITE)[0])
    return str(caught.value)


def test_stamps_in_a_column_are_named_with_set_index():
    """``pandas.read_csv`` without ``index_col`` leaves the stamps in a column."""
    text = _refusal(_frame().reset_index())
    assert "got RangeIndex" in text and "frame.set_index('time')" in text
    as_text = _frame().reset_index()
    as_text["time"] = as_text["time"].dt.strftime("%Y-%m-%d %H:%M")
    assert "pandas.to_datetime(frame['time'])" in _refusal(as_text)


def test_an_index_of_text_is_named():
    frame = _frame()
    frame.index = frame.index.strftime("%d.%m.%Y %H:%M")
    assert "the index holds text" in _refusal(frame)


def test_the_autumn_hour_of_daylight_saving_time_is_named():
    """Central European stamps on summer time: 02:00-02:30 occur twice on 31 Oct 2021
    (the last Sunday of October, Directive 2000/84/EC (m))."""
    frame = _frame()
    frame.index = (frame.index.tz_localize("Etc/GMT-1").tz_convert("Europe/Berlin")
                   .tz_localize(None))
    text = _refusal(frame)
    assert "2021-10-31 02:00" in text and "daylight-saving" in text
    # hourly, United States Eastern: 01:00 twice on 7 Nov 2021 (first Sunday of November)
    hourly = _frame(days=12, freq="60min", start="2021-11-01")
    hourly.index = (hourly.index.tz_localize("Etc/GMT+5").tz_convert("America/New_York")
                    .tz_localize(None))
    text = _refusal(hourly)
    assert "2021-11-07 01:00" in text and "daylight-saving" in text


def test_an_overlap_of_two_files_is_counted():
    frame = _frame()
    both = pd.concat([frame.iloc[:100], frame.iloc[90:]])
    text = _refusal(both)
    assert "10 stamp(s) occur more than once" in text and "duplicated" in text


def test_files_out_of_order_are_named_with_sort_index():
    frame = _frame()
    text = _refusal(pd.concat([frame.iloc[60:], frame.iloc[:60]]))
    assert "out of order" in text and "sort_index()" in text


def test_unparsed_stamps_are_counted():
    """Day-first stamps read month-first: 13.10. and later days give NaT."""
    frame = _frame()
    frame.index = pd.to_datetime(frame.index.strftime("%d/%m/%Y %H:%M"),
                                 format="%m/%d/%Y %H:%M", errors="coerce")
    assert frame.index.isna().all()
    assert "missing stamp(s) (NaT)" in _refusal(frame)


def test_a_regular_index_needs_no_hint():
    """Zero false alarms: the functions say nothing where nothing is wrong."""
    frame = _frame()
    assert validate(prepare(frame, SITE)[0]) == 30
    assert index_hint(pd.DataFrame({"nee": [1.0, 2.0]})) == ""
    # a step back of one record (not an hour repeated) is no daylight saving
    swapped = frame.index[[0, 1, 3, 2, 4, 5]]
    assert "out of order" in order_hint(swapped, 3)
