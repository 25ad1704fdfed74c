"""Leftovers of session 52 (round leftovers53): the exit status of ``check`` for every
finding it can list.

Outside facts: the exit statuses are those the README's command table documents (0
clean, 1 problems, 2 error; POSIX leaves their meaning to the program (m)). The record is
the invented grassland example (a fictional site).
"""
from pathlib import Path

import pandas as pd
import pytest
from test_leftovers51 import listable_stages

from fluxpart import cli, io, pipeline
from fluxpart.preflight import Finding

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.toml"


@pytest.fixture(scope="module")
def example_read():
    """The example's site config and what its reader returns, read once."""
    site_config = io.read_site_config(EXAMPLE)
    return site_config, site_config.read(unit_problems="report")


@pytest.fixture
def checked(example_read, monkeypatch, capsys):
    """``check`` of the example with the findings given in place of the preflight's;
    returns (exit status, printed text)."""
    site_config, read = example_read

    class Read:
        site = site_config.site

        @staticmethod
        def read(unit_problems="refuse"):
            return read

    thresholds = pd.DataFrame({"year": [2021], "period": ["year"], "threshold": [0.15],
                               "threshold_p05": [0.14], "threshold_p95": [0.16],
                               "source": ["detected"]})
    monkeypatch.setattr(io, "read_site_config", lambda path, **kwargs: Read)
    monkeypatch.setattr(pipeline, "screening_summary",
                        lambda *args: (pd.Series({"kept": 1}), thresholds))

    def run(findings):
        monkeypatch.setattr(pipeline, "check_record", lambda *a, **k: (None, findings))
        status = cli.main(["check", str(EXAMPLE)])
        return status, capsys.readouterr().out
    return run


def test_every_finding_check_can_list_exits_1_and_says_whether_run_stops(checked):
    """Each stage label the package can give a finding (the preflight docstring's map,
    walked as test_leftovers51 walks it), listed by ``check``: a line under "problems
    found", exit 1 whether it stops the run or not, "(run stops)" exactly on the fatal
    ones; nothing listed: exit 0 (the README's exit-status table)."""
    stages = sorted(listable_stages())
    assert len(stages) > 40
    status, out = checked([])
    assert status == 0 and "problems found: none" in out
    status, out = checked([Finding("annual budget", "a partial year", False)])
    assert status == 1 and "  - annual budget: a partial year\n" in out
    for fatal in (False, True):
        status, out = checked([Finding(stage, "a condition", fatal) for stage in stages])
        assert status == 1 and f"problems found ({len(stages)})" in out
        for stage in stages:
            line = f"  - {stage}: a condition"
            assert line in out, (stage, fatal)
            assert (line + " (run stops)" in out) is fatal, (stage, fatal)
