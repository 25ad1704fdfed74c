"""Review63: release 0.33.0 met fresh as a tower scientist, an auditor and a modeller.

Each test is a behaviour check of a message found misleading on an invented site-year
(a fictional fen's logger file: its own column names, kelvin and kPa, 35 % gaps).
"""

import pytest

from fluxpart.errors import ConfigError
from fluxpart.io import _check_time_marks


@pytest.mark.parametrize("slip, meant", [("Start", "start"), ("middel", "middle"),
                                         ("END", "end"), ("endd", "end")])
def test_a_slip_of_a_time_mark_is_named(slip, meant):
    """A typo or another case of one of the three words gets that word as its hint."""
    with pytest.raises(ConfigError, match=f'did you mean "{meant}"'):
        _check_time_marks(slip)


@pytest.mark.parametrize("word", ["stop", "begin", "centre", "center", "stamp_end"])
def test_another_word_gets_the_meaning_not_the_opposite_mark(word):
    """Behaviour check: "stop" was answered 'did you mean "start"?', "begin" and
    "centre" 'did you mean "end"?' (difflib cutoff 0.4): a user who followed the hint
    had every stamp moved by one record. Another word now gets no guess, only what each
    choice means (fact of the trade: a record's stamp marks its averaging interval's
    start, middle or end)."""
    with pytest.raises(ConfigError) as caught:
        _check_time_marks(word)
    text = str(caught.value)
    assert "did you mean" not in text
    assert text.startswith(f'[input] time_marks = "{word}"')
    assert "start, middle or end" in text


def test_percent_the_udunits_name_of_rh_units_is_read_as_percent():
    """Behaviour check: `[input.units] rh = "percent"`, the UDUNITS-2 and CF name of %
    that fluxpart's own NetCDF and CSVW metadata write, was refused as "not a known unit
    for rh". It is read as % (UDUNITS-2 database: percent = 0.01 (m))."""
    import numpy as np

    from fluxpart.variables import to_canonical, unit_spelling, units_for

    assert "percent" in units_for("rh")
    values = np.array([35.5, 100.0])
    assert np.array_equal(to_canonical(values, "rh", unit_spelling("rh", "percent")),
                          to_canonical(values, "rh", "%"))


def test_a_run_that_replaces_another_inputs_result_says_so(tmp_path):
    """Behaviour check: `run` into the folder of an earlier result of the same [site] name
    but another input (the 2022 config run into the folder that held 2024) replaced it, as
    documented, without a word. A note now names the input the folder held, by the
    SHA-256 its manifest recorded; the same input, a new folder or a folder without a
    readable manifest give no note."""
    import json

    from fluxpart.cli import _inputs_held, replaced_note

    out = tmp_path / "out"
    out.mkdir()
    assert _inputs_held(out) == ()
    now = {"path": "../tower_2022.csv", "sha256": "a" * 64}
    (out / "manifest.json").write_text(json.dumps({"provenance": {"input": now}}))
    earlier = (("../tower_2024.csv", "b" * 64),)
    note = replaced_note(out, earlier)
    assert note.startswith("note: ") and "'tower_2024.csv' (sha256 bbbbbbbbbbbb...)" in note
    assert "this run replaced it" in note
    assert replaced_note(out, (("../tower_2022.csv", "a" * 64),)) == ""
    assert replaced_note(out, ()) == ""
    (out / "manifest.json").write_text("{not json")
    assert _inputs_held(out) == () and replaced_note(out, earlier) == ""
