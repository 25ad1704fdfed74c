"""A new user's reading of the docs and of `check`'s clock note (round newuser55).

The project's rule for user-facing text: it names releases, never the names of the
development rounds (the README, docs/checks.md and docs/logger-files.md named 65 of
them, such as "since auditor53"; the report's settings table, drawn from the
``Config`` docstring, five). The round names are read from the changelog's round
headings in DEVELOPERS.md, so a round added later is guarded too.
"""
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


# A round's name: lower-case letters, perhaps digits among them, ending in digits
# ("auditor53", and "resp2temp50", which the letters-then-digits form missed).
ROUND_NAME = r"\b[a-z][a-z0-9]*\d+\b"


def _round_names() -> set[str]:
    """Every round name a changelog heading gives after "round" or "rounds": at its end,
    ``#### ... (round NAME)``, or within it, ``(issue 11, round NAME)`` or
    ``#### Fresh-eyes review of round NAME``."""
    names = set()
    for line in (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8").splitlines():
        if line.startswith("#### "):
            for named in re.findall(r"\brounds? ([^)]*)", line):
                names.update(re.findall(ROUND_NAME, named))
    return names


def _named_rounds(text: str, names: set[str]) -> list[str]:
    return sorted({word for word in re.findall(ROUND_NAME, text) if word in names})


def test_the_changelog_names_rounds_to_guard_against():
    names = _round_names()
    assert len(names) > 100                     # the guard below reads a real list
    assert {"auditor53", "leftovers53", "layouts43", "mistakes55"} <= names
    # named within a heading, or with digits inside the name
    assert {"gapnoise54", "layouts51", "rgdim57", "resp2temp50"} <= names


def test_user_docs_name_releases_not_rounds():
    names = _round_names()
    for page in ("README.md", "docs/checks.md", "docs/logger-files.md"):
        text = (ROOT / page).read_text(encoding="utf-8")
        assert _named_rounds(text, names) == [], page


def test_the_report_settings_text_names_no_round():
    """The report's "Settings and their sources" table prints each setting's paragraph
    of the Config docstring: it named rounds nightbias51, donormargin51, nightbias52,
    darkfit51 and dayshape49, and later trace31 and resp2temp50 (`driver_day_prior`,
    `driver_share_spread`)."""
    from fluxpart.report import _config_notes
    notes = _config_notes()
    assert "night_donor_margin" in notes and "0.34.0 changelog" in notes["night_donor_margin"]
    found = {name: _named_rounds(note, _round_names()) for name, note in notes.items()}
    assert {name: rounds for name, rounds in found.items() if rounds} == {}


def test_the_clock_note_names_rg_zeros_among_what_may_follow():
    """A clock hours off puts the settings' noon in the record's night: measured Rg is 0
    where the potential radiation (Spencer 1971 (m), a function of the time of day) is
    high, and `check` listed 1014 "lost values written as 0" beside the clock's refusal
    (an invented site at UTC+10 configured as -10). The note that says which problems
    may follow from the clock now names those zeros with the rest."""
    from fluxpart.cli import _follow_on_note
    clock = ["clock: measured Rg comes 241 min earlier than the sun ... (run stops)"]
    note = _follow_on_note((), clock, 3)
    assert note.startswith("  note: the run stops at the clock or site geometry named above")
    assert "Rg of 0 with the sun up" in note
    assert _follow_on_note((), clock, 1) == ""              # nothing else listed


def test_the_clock_line_of_check_does_not_read_a_wrong_latitude_as_a_clock_fault():
    """The clock check's status names the site geometry where the clock itself agreed
    (fluxpart.clock: "hemisphere" and "latitude" only replace "consistent"), and `check`
    printed it on its clock line: "clock  hemisphere" above "hemisphere  mismatch" for a
    latitude of the wrong sign. The clock line now says the clock agreed and the
    geometry did not; a shifted clock is printed as before."""
    from types import SimpleNamespace

    from fluxpart.cli import _format_clock

    def verdict(status, shift, hemisphere="consistent"):
        return SimpleNamespace(status=status, shift_minutes=shift, spread_minutes=8.0,
                               months_used=12, hemisphere=hemisphere, notes=())

    text = _format_clock(verdict("hemisphere", -1.0, "mismatch"))
    assert "  clock            consistent (the hemisphere is not: see the problems)" in text
    assert "  hemisphere       mismatch" in text
    text = _format_clock(verdict("latitude", 2.0))
    assert "  clock            consistent (the latitude is not: see the problems)" in text
    text = _format_clock(verdict("hemisphere", float("nan"), "mismatch"))
    assert "  clock            cannot judge (the hemisphere is not" in text
    assert "  clock            shifted" in _format_clock(verdict("shifted", 61.0))
    assert "  clock            daylight saving" in _format_clock(verdict("daylight_saving", 0.0))


def test_check_names_partial_budget_years_of_a_full_year_of_records():
    """`run` warns of each budget year it holds only part of; `check` named only a record
    shorter than 365 days, and found "none" for a calendar year of records under
    year_start = "07-01" (two budget years of six months each). The expected count is
    the Gregorian calendar's: 365 days of 48 half-hours, 17,520, and 17,568 for a budget
    year holding 29 February (a fact of the calendar)."""
    import pandas as pd

    from fluxpart.preflight import _partial_budget_years
    year = pd.date_range("2023-01-01", periods=17520, freq="30min")
    assert _partial_budget_years(year, 30, "01-01") == []          # a whole calendar year
    texts = _partial_budget_years(year, 30, "07-01")
    assert len(texts) == 2
    assert texts[0].startswith("budget year 2022 (2022-07-01 to 2023-06-30) holds 8688 of "
                               "17520 records (6.0 months)")
    assert texts[1].startswith("budget year 2023 (2023-07-01 to 2024-06-30) holds 8832 of "
                               "17568 records (6.0 months)")
    # a year of records from April under calendar years: both ends partial (275 days)
    april = pd.date_range("2023-04-01", periods=17520, freq="30min")
    texts = _partial_budget_years(april, 30, "01-01")
    assert [text.split(" (")[0] for text in texts] == ["2023", "2024"]
    assert "holds 13200 of 17520 records (9.0 months)" in texts[0]
    # hourly records of a whole budget year from July
    hourly = pd.date_range("2023-07-01", periods=8784, freq="60min")
    assert _partial_budget_years(hourly, 60, "07-01") == []
