"""Leftovers of earlier rounds (round leftovers58): check's verdict against its exit status
on every path, one hashing of files, the clock's part in Rg of 0 with the sun up, and
calendar budget years south of the tropics.

Outside facts, each named beside its check: the exit statuses the README's command table
documents (0 clean or notes alone, 1 problems, 2 error; POSIX leaves their meaning to the
program (m)); SHA-256 of "abc" from FIPS 180-2, appendix B.1, and :mod:`hashlib` (the
standard library) as the reference digest; the tropics' edge at the Earth's axial tilt,
23.44° (IAU 2006 obliquity (m)); budget years from 1 July south of the tropics (common
practice (m)). The record is the invented grassland example (a fictional site).
"""
import dataclasses
import hashlib
import inspect
import math
from pathlib import Path

import pandas as pd
import pytest

from fluxpart import cli, io, pipeline, store
from fluxpart.clock import ClockVerdict
from fluxpart.errors import FluxpartError
from fluxpart.preflight import CLOCK_SHIFT_CLAUSE, Finding, defer_to_clock
from fluxpart.year_start_season import TROPIC_LATITUDE, calendar_year_in_the_south

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"


@pytest.fixture(scope="module")
def example_read():
    """The example's site config and what its reader returns, read once."""
    site_config = io.read_site_config(EXAMPLE)
    return site_config, site_config.read(unit_problems="report")


@pytest.fixture
def checked(example_read, monkeypatch, capsys):
    """``check`` of the example with the verdict, findings, u* table (or the u* stage's
    error) and latitude given; returns (exit status, printed text)."""
    site_config, read = example_read

    def run(verdict=None, findings=(), thresholds=None, stop=None, latitude=None):
        class Read:
            site = (site_config.site if latitude is None else
                    dataclasses.replace(site_config.site, latitude=latitude))

            @staticmethod
            def read(unit_problems="refuse"):
                return read

        table = pd.DataFrame({"year": [2021], "period": ["year"], "threshold": [0.15],
                              "threshold_p05": [0.14], "threshold_p95": [0.16],
                              "source": ["detected"]}) if thresholds is None else thresholds

        def summary(*args):
            if stop is not None:
                raise FluxpartError(stop)
            return pd.Series({"kept": 1}), table

        monkeypatch.setattr(io, "read_site_config", lambda path, **kwargs: Read)
        monkeypatch.setattr(pipeline, "screening_summary", summary)
        monkeypatch.setattr(pipeline, "check_record",
                            lambda *a, **k: (verdict, list(findings)))
        status = cli.main(["check", str(EXAMPLE)])
        return status, capsys.readouterr().out
    return run


def _agree(status: int, out: str) -> None:
    """check's printed verdict and its exit status agree (the README's table): a stop
    named only on a problem line, and then exit 1; "problems found: none" only with
    exit 0; exit 1 only with problems listed."""
    stops = [line for line in out.splitlines() if "(run stops)" in line]
    assert all(line.startswith("  - ") for line in stops), stops
    if stops or "run would stop" in out:
        assert status == 1, out
    assert ("problems found: none" in out) is (status == 0), (status, out)
    assert ("\nproblems found (" in out) is (status == 1), (status, out)


def _verdict(problems=(), notes=()):
    return ClockVerdict("shifted" if problems else "consistent", 239.0 if problems else 0.0,
                        4.0, 12, None, tuple(problems), tuple(notes), "consistent", None)


def test_check_verdict_and_exit_status_agree_on_every_path(checked):
    """Every way ``check`` names a stop: a clock problem under clock_check = "refuse"
    (the default), the u* stage's error, the nighttime E0 foreseen missing, a fatal
    finding; and the lines that stop nothing: a clock note, a fall-back, the note of
    calendar years in the south. Each time the printed verdict and the exit status agree
    (test_leftovers53 walked the findings alone; no mismatch found on any path)."""
    clean = checked()
    assert clean[0] == 0 and "problems found: none" in clean[1]
    _agree(*clean)
    clock = checked(verdict=_verdict(["clock: measured Rg comes 239 min later"]))
    assert clock[0] == 1 and "  - clock: measured Rg comes 239 min later (run stops)" in clock[1]
    _agree(*clock)
    noted = checked(verdict=_verdict(notes=["clock not judged: 2 usable month(s)"]))
    assert noted[0] == 0 and "  note: clock not judged" in noted[1]
    _agree(*noted)
    ustar = checked(stop="no season has enough night records")
    assert ustar[0] == 1
    assert "  - u* threshold: no season has enough night records (run stops)" in ustar[1]
    assert "not estimated (run would stop" in ustar[1]
    _agree(*ustar)
    table = pd.DataFrame({"year": [2021], "period": ["year"], "threshold": [0.15],
                          "threshold_p05": [0.14], "threshold_p95": [0.16],
                          "source": ["detected"]})
    table.attrs["e0_stops"] = ("nighttime partitioning (E0): no year has an E0",)
    e0 = checked(thresholds=table)
    assert e0[0] == 1 and "no year has an E0 (run stops)" in e0[1]
    _agree(*e0)
    fatal = checked(findings=[Finding("night mask", "no night records", True)])
    assert fatal[0] == 1 and "  - night mask: no night records (run stops)" in fatal[1]
    _agree(*fatal)
    fallback = checked(findings=[Finding("annual budget", "a partial year", False)])
    assert fallback[0] == 1 and "(run stops)" not in fallback[1]
    _agree(*fallback)


def test_calendar_years_south_of_the_tropics_get_a_check_note_only(checked):
    """A site at 34.5° S (invented) left at year_start = "01-01": one note naming
    "07-01" (budget years from 1 July south of the tropics, common practice (m)), exit 0
    as for any note; none north of the equator, none inside the tropics (23.44°, the
    axial tilt (m)), none where another start is set."""
    status, out = checked(latitude=-34.5)
    note = [line for line in out.splitlines() if line.startswith("note: budget year:")]
    assert status == 0 and len(note) == 1 and 'year_start = "07-01"' in note[0]
    assert "34.5° S" in note[0]
    _agree(status, out)
    assert "\n\nnote: budget year:" in out                  # apart from the problems
    assert "note: budget year" not in checked()[1]           # 49.3° N: the example
    # Rg says the other hemisphere (a latitude of the wrong sign): the geometry's problem
    # is named, not the south's budget year
    wrong = dataclasses.replace(_verdict(["site geometry: Rg peaks in June"]),
                                hemisphere="mismatch", status="hemisphere")
    status, out = checked(verdict=wrong, latitude=-34.5)
    assert status == 1 and "note: budget year" not in out
    assert TROPIC_LATITUDE == pytest.approx(23.44, abs=0.01)
    assert calendar_year_in_the_south("01-01", -23.0) is None
    assert calendar_year_in_the_south("01-01", -23.5) is not None
    assert calendar_year_in_the_south("07-01", -34.5) is None
    assert calendar_year_in_the_south("01-01", 34.5) is None


def test_a_run_warns_nothing_of_calendar_years_in_the_south():
    """The note is check's alone: no module of the run calls it (a run warning would
    change the manifests of folders written before)."""
    root = Path(cli.__file__).parent
    callers = [path.name for path in root.glob("*.py")
               if "calendar_year_in_the_south(" in path.read_text(encoding="utf-8")
               and path.name != "year_start_season.py"]
    assert callers == ["cli.py"]


def test_rg_of_0_with_the_sun_up_says_a_clock_shift_may_explain_it():
    """Under a clock shifted against the sun (the verdicts "shifted" and
    "daylight_saving") the Rg-zeros finding stays and says the shift may explain it (a
    shift of some months leaves the others judged right); under a wrong latitude it is
    dropped (review39), under a consistent clock unchanged."""
    zeros = Finding("input (rg zeros)", "rg reads 0 W m-2 or less in 865 records", False)
    other = Finding("night mask", "a threshold reached", False)
    for status in ("shifted", "daylight_saving"):
        found = defer_to_clock([zeros, other], status)
        assert found[0].message == zeros.message + CLOCK_SHIFT_CLAUSE
        assert found[0].stage == zeros.stage and found[0].fatal is False
        assert found[1] == other
    assert defer_to_clock([zeros, other], "consistent") == [zeros, other]
    assert defer_to_clock([zeros, other], "latitude") == [other]


def test_the_example_at_a_clock_four_hours_off_names_the_zeros_as_following(example_read):
    """The invented grassland at utc_offset = -3 for +1 (stamps four hours off): the clock
    refuses, and the 865 records of Rg 0 "with the sun up" (the sun of a wrong hour) are
    marked as what the clock may explain."""
    site_config, (frame, _) = example_read
    site = dataclasses.replace(site_config.site, utc_offset=-3.0)
    verdict, findings = pipeline.check_record(frame, site)
    assert verdict.status == "shifted" and abs(verdict.shift_minutes - 240) < 10
    zeros = [f for f in findings if f.stage == "input (rg zeros)"]
    assert len(zeros) == 1 and zeros[0].message.endswith(CLOCK_SHIFT_CLAUSE)


def test_input_and_result_files_are_hashed_by_one_function(tmp_path):
    """The reader's and the store's SHA-256 of a file: FIPS 180-2's "abc" vector
    (appendix B.1) and hashlib's digest of 2.5 MiB (three blocks, the last one short);
    each keeps its words for a file it cannot read; neither holds the read loop."""
    from fluxpart import file_digest

    small = tmp_path / "abc.txt"
    small.write_bytes(b"abc")
    vector = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    assert io._file_sha256(small) == store.file_sha256(small) == vector
    large = tmp_path / "large.bin"
    data = bytes(range(256)) * math.ceil(2.5 * 4096)
    large.write_bytes(data)
    assert io._file_sha256(large) == store.file_sha256(large) == hashlib.sha256(data).hexdigest()
    for function in (io._file_sha256, store.file_sha256):
        source = inspect.getsource(function)
        assert "sha256_of_file(" in source and ".read(" not in source
    assert "def sha256_of_file" in inspect.getsource(file_digest)
    with pytest.raises(FluxpartError, match="does not exist|not found|no such"):
        io._file_sha256(tmp_path / "missing.csv")
    with pytest.raises(FluxpartError):
        store.file_sha256(tmp_path)                       # a folder: cannot be read
