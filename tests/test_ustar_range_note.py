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
