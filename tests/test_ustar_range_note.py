"""Tests of fluxpart.ustar_range_note: a u* threshold outside its own bootstrap range."""

import numpy as np
import pandas as pd

from fluxpart.cli import _outside_range_lines
from fluxpart.ustar_range_note import outside_range_clause


def test_a_threshold_outside_its_bootstrap_range_is_said_with_why():
    """A percentile interval need not hold the statistic it was drawn for (Efron &
    Tibshirani 1993, ch. 13 (m)); the u* draws read about 2 % low because a resample's
    class means are noisier (round ustar47, 168 generated site-years). The report showed
    0.181 against 0.154-0.178 without a word (polish48)."""
    above = outside_range_clause(0.181, 0.154, 0.178)
    assert above.startswith("above its bootstrap range") and "about 2 % low" in above
    assert outside_range_clause(0.150, 0.154, 0.178).startswith("below its bootstrap range")
    # inside, or equal to an end as printed with three decimals: nothing to say
    assert outside_range_clause(0.160, 0.154, 0.178) == ""
    assert outside_range_clause(0.1784, 0.154, 0.1781) == ""
    assert outside_range_clause(0.181, np.nan, 0.178) == ""
    assert outside_range_clause(None, 0.154, 0.178) == ""


def test_check_notes_each_row_outside_its_range():
    """`check` prints the u* table with its percentiles; a row whose threshold lies outside
    its 5-95 % range gets one note line naming the year and period."""
    table = pd.DataFrame({"year": [2021, 2021, 2022], "period": ["year", "summer", "year"],
                          "threshold": [0.181, 0.20, 0.15],
                          "threshold_p05": [0.154, 0.17, 0.14],
                          "threshold_p95": [0.178, 0.23, 0.17]})
    lines = _outside_range_lines(table)
    assert len(lines) == 1
    assert lines[0].startswith("  note: 2021 year: the threshold 0.181 m s-1 lies above its "
                               "bootstrap range")
    assert _outside_range_lines(table[["year", "period", "threshold"]]) == []


def test_a_threshold_far_above_its_draws_median_is_not_explained_by_their_low_reading():
    """The draws read a median 1.8 % low (module note, 168 generated site-years); a check of
    an invented hourly winter printed 0.316 m s-1 against draws of median 0.197 and 5-95 %
    range 0.140-0.308, with that 2 % as the reason (round newuser56). Far above the median
    the clause names the distance and says the threshold is poorly determined; near the
    range's top it keeps the 2 % reason."""
    far = outside_range_clause(0.316, 0.140, 0.308, median=0.197)
    assert far.startswith("above its bootstrap range and 60 % above the draws' median 0.197")
    assert "poorly determined" in far and "as can happen" not in far
    near = outside_range_clause(0.181, 0.154, 0.178, median=0.170)
    assert "about 2 % low" in near and "poorly determined" not in near
    # a median that is missing or not a number leaves the reason as before
    for median in (None, np.nan, "x"):
        assert "about 2 % low" in outside_range_clause(0.316, 0.140, 0.308, median=median)
    # below the range the median changes nothing
    assert outside_range_clause(0.100, 0.140, 0.308, median=0.197).startswith("below")


def test_check_names_the_draws_median_where_the_table_holds_it():
    table = pd.DataFrame({"year": [2023], "period": ["winter"], "threshold": [0.316],
                          "threshold_p05": [0.140], "threshold_p50": [0.197],
                          "threshold_p95": [0.308]})
    (line,) = _outside_range_lines(table)
    assert "60 % above the draws' median 0.197 m s-1" in line


def test_the_reports_range_names_the_draws_median_too():
    """The report's summary clause takes the year row's median as `check` does (round
    newuser56 changed both; only `check`'s lines were tested, review89)."""
    from types import SimpleNamespace

    from fluxpart.report import _ustar_range

    table = pd.DataFrame({"year": [2023, 2023], "period": ["year", "winter"],
                          "threshold": [0.316, 0.2], "threshold_p05": [0.140, 0.1],
                          "threshold_p50": [0.197, 0.15], "threshold_p95": [0.308, 0.3]})
    written = SimpleNamespace(table=lambda name: table)
    clause = _ustar_range(written, 2023)
    assert clause.startswith(" (bootstrap 5–95 %: 0.140–0.308 m s-1; above its bootstrap "
                             "range and 60 % above the draws' median 0.197 m s-1")
    assert "poorly determined" in clause and "about 2 % low" not in clause
