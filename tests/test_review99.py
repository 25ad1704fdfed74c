"""Round review99: fresh-eyes cases of the flag notes of 0.40.0."""
from __future__ import annotations

import numpy as np

from fluxpart.flag_grades import middle_grade_warning


def _combined(flags, accept):
    stacked = np.vstack(flags)
    return np.where((np.isfinite(stacked) & ~np.isin(stacked, accept)).any(axis=0), 1.0, 0.0)


def test_a_middle_grade_that_another_flag_column_rejects_is_not_offered():
    """A graded flag (0 best, 1 usable, 2 discard: the 0-1-2 scheme of Mauder & Foken
    2004 (m)) mapped beside a sector flag (0 kept, 1 rejected: common practice) under
    flag_accept = [0]: the sector rejects 36 %, and the note advised flag_accept = [0, 1],
    one list for both columns, which keeps every record the sector flag rejects while
    the all-keeping note stays silent (grade 2 still rejects). A sector flag of 0 / 2
    leaves grade 1 offered."""
    rng = np.random.default_rng(0)
    nee = np.ones(1000)
    grade = np.where(rng.random(1000) < 0.03, 1.0, 0.0)
    grade[::200] = 2
    sector = np.where(rng.random(1000) < 0.36, 1.0, 0.0)
    flags = [grade, sector]
    assert middle_grade_warning(flags, ["qc", "sector"], (0,), nee,
                                _combined(flags, [0])) == ""
    flags = [grade, 2 * sector]
    text = middle_grade_warning(flags, ["qc", "sector"], (0,), nee, _combined(flags, [0]))
    assert "flag_accept = [0, 1]" in text and "qc + sector" in text


def test_a_stated_count_reads_a_named_clock_with_its_offset_and_skips_a_span_in_prose():
    """CF conventions write a count as "<unit> since <date> [<clock>]" (section 4.4 (m)).
    "UTC+1" above the header was read as UTC: a file whose setting says +01:00 was
    refused, with advice to set UTC (an hour off). "4 days since 2023-04-28" in a
    processing note (a span, a number before the unit) refused a good file."""
    from fluxpart.stamp_places import stated_count_message

    def line(text):
        return [("line 1 of 'a.csv'", text)]

    setting = "seconds since 1990-01-01 00:00:00 +01:00"
    for text in ("Time: seconds since 1990-01-01 00:00:00 UTC+1",
                 "Time: seconds since 1990-01-01 00:00:00 GMT+01:00"):
        assert stated_count_message(line(text), setting) is None
    refused = stated_count_message(line("Time: seconds since 1990-01-01 00:00:00 UTC-5"),
                                   setting)
    assert "clocks' offset apart" in refused
    assert 'set time_format = "seconds since 1990-01-01 00:00:00 -5"' in refused
    note = "Processed 2023-05-02; logger uptime 4 days since 2023-04-28 restart"
    assert stated_count_message(line(note), "days since 2000-01-01") is None
    assert "23.3 years apart" in stated_count_message(
        line("Time: days since 2023-04-28"), "days since 2000-01-01")
