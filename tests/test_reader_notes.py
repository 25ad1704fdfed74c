"""Reader notes apart from warnings (readernotes51, after review64).

A note says how the reader understood a layout where every value is read as the file
means it; a warning says that a value was changed, dropped, guessed or may be wrong.
`fluxpart check` exits 1 on warnings only (its exit status: test_cli.py). The facts checked
here are facts of the file: lines that hold no value (blank lines, comment lines) cannot
change a value read, and a record dropped is a value lost.
"""

import json

from test_io import _read, _records, _write

from fluxpart.coverage import coverage_table, format_check
from fluxpart.reader_notes import notes_moved
from fluxpart.site import Site


def _tower_file(tmp_path, before="", after=""):
    path = _write(tmp_path / "t.csv", _records(96))
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    path.write_text(before + lines[0] + "".join(lines[1:]) + after, encoding="utf-8")
    return path


def test_lines_that_hold_no_value_are_notes_not_warnings(tmp_path):
    """Blank lines above the header and a block of comment lines ending the file hold no
    value: both are notes, the records read are those of the file without them, and the
    warnings are empty, so `check` lists them apart ("problems found: none")."""
    plain, _ = _read(_tower_file(tmp_path))
    frame, report = _read(_tower_file(tmp_path, before="\n\n",
                                      after="# written by the logger\n# end of file\n"))
    assert report.warnings == ()
    assert len(report.notes) == 2
    assert "2 blank line(s) above the header (line 3) read past" in report.notes[0]
    assert "comment lines ending the file, a footer: dropped" in report.notes[1]
    assert frame.equals(plain) and report.records_read == 96
    # the manifest's reader record holds them as plain JSON text, apart from the warnings
    record = json.loads(json.dumps(report.to_dict()))
    assert record["notes"] == list(report.notes) and record["warnings"] == []
    site = Site(name="Hollow Fen", latitude=-41.3, longitude=172.8, utc_offset=12.0)
    text = format_check(site, report, coverage_table(frame, report.interval_minutes),
                        notes=report.notes)
    assert "problems found: none\nnotes (the file was read as it means) (2)\n" in text


def test_a_record_dropped_stays_a_warning_and_an_ordinary_record_has_no_notes(tmp_path):
    """The last line cut short (a logger stopped mid-write) loses a record: a warning, not
    a note. A file with nothing to note gives a reader record without a `notes` key, so
    that the manifest of an ordinary file is as before."""
    path = _tower_file(tmp_path)
    text = path.read_text(encoding="utf-8")
    path.write_text(text + text.splitlines()[-1].rsplit(",", 3)[0] + "\n", encoding="utf-8")
    _, report = _read(path)
    assert report.notes == () and "notes" not in report.to_dict()
    assert len(report.warnings) == 1 and "a record cut short" in report.warnings[0]


def test_note_lines_are_notes_only_where_the_setting_names_their_mark(tmp_path):
    """A note line among the records opening with a mark no record starts with is skipped:
    a note where `[input] note_mark` names the mark, a warning where the reader inferred
    it (when in doubt a message stays a warning)."""
    path = _tower_file(tmp_path)
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    path.write_text("".join(lines[:40] + ["# power cut, logger restarted\n"] + lines[40:]),
                    encoding="utf-8")
    _, inferred = _read(path)
    _, named = _read(path, note_mark="#")
    assert len(inferred.warnings) == 1 and inferred.notes == ()
    assert "as no record does" in inferred.warnings[0]
    assert named.warnings == () and len(named.notes) == 1
    assert "[input] note_mark (line 41" in named.notes[0]


def test_verify_names_notes_moved_out_of_an_earlier_results_warnings():
    """A result written before readernotes51 holds the reader's notes among its warnings
    (run and reader record); its rerun records them apart. That move alone is named as a
    note by `verify` (a 0.33.0 folder with blank lines above its header: verified, the
    tables bit-identical); a warning edited or dropped in the stored manifest stays a
    difference, and a result written with notes compares them as any field."""
    note = "input file 't.csv': 2 blank line(s) above the header (line 3) read past"
    stored = {"warnings": [f"input: {note}", "budget year: 2021 starts in June"],
              "provenance": {"reader": {"warnings": [note, "nee: 3 value(s) outside"]}}}
    recomputed = {"warnings": ["budget year: 2021 starts in June"],
                  "provenance": {"reader": {"warnings": ["nee: 3 value(s) outside"],
                                            "notes": [note]}}}
    assert notes_moved(stored, recomputed)
    assert not notes_moved({**stored, "warnings": stored["warnings"][:1]}, recomputed)
    assert not notes_moved({**stored, "provenance": {"reader": {"warnings": [note]}}},
                           recomputed)
    assert not notes_moved(recomputed, recomputed)
    assert not notes_moved(stored, {**stored, "provenance": {"reader": {"warnings": []}}})


def test_values_under_a_stamp_word_that_names_no_statistic_stay_a_warning(tmp_path):
    """Rows ending the file with a word for a stamp are dropped. Under a statistic's name
    ("mean", "Std. dev.") or holding no value ("END OF FILE,,,,") they hold no record: a
    note. Values under another word ("Invalid Date": a stamp a program failed to write)
    may be records whose stamp was lost: a warning (review65: a note said "no record")."""
    path = _tower_file(tmp_path)
    width = path.read_text(encoding="utf-8").splitlines()[0].count(",")
    values = "," + ",".join(["1.5"] * width) + "\n"
    for after, note in (("mean" + values + "Std. dev." + values, True),
                        ("END OF FILE" + "," * width + "\n", True),
                        ("Invalid Date" + values, False)):
        path = _tower_file(tmp_path, after=after)
        frame, report = _read(path)
        assert report.records_read == 96
        said = report.notes if note else report.warnings
        assert len(said) == 1 and "a word for a stamp" in said[0], (after, report)
        assert (report.warnings if note else report.notes) == ()
