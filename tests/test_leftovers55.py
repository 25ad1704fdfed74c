"""Leftovers of session 52 (round leftovers55): the daily anomaly in one public module;
``diff`` of inputs whose bytes differ and of reader notes moved between releases; the
report's settings of a folder written before a setting was added.

Outside facts, each named beside its check: the mean of a sinusoid over any whole
period is zero (trigonometry), so a centred running mean over one day leaves a sine of
one day's period unchanged; ``tarfile`` (Python's standard library) writes a POSIX tar
archive. The result folders are the session's invented bundle.
"""
import re
from pathlib import Path

import numpy as np
from test_leftovers51 import copied_rerun
from test_verify import _edit_manifest, _set_value

from fluxpart.cli import main
from fluxpart.daily_anomaly import daily_anomaly
from fluxpart.diff import diff_folders


def test_the_daily_anomaly_keeps_a_daily_sine_and_removes_a_level():
    """A sine of one day's period (48 records a day) plus a level of 7: the anomaly is
    the sine (its mean over any whole day is 0, trigonometry), NaN where fewer than half
    a day's records stand in the window; and one implementation, imported by both checks
    of the air temperature against the humidity probe."""
    per_day = 48
    k = np.arange(10 * per_day)
    sine = np.sin(2 * np.pi * k / per_day)
    anomaly = daily_anomaly(sine + 7.0, per_day)
    whole = slice(per_day // 2, sine.size - per_day // 2 + 1)   # windows of a whole day
    np.testing.assert_allclose(anomaly[whole], sine[whole], atol=1e-12)
    assert np.isfinite(anomaly).all()              # half a day stands even at the ends
    level = np.full(4 * per_day, 3.5)
    level[100] = np.nan
    np.testing.assert_array_equal(np.isnan(daily_anomaly(level, per_day)),
                                  np.arange(level.size) == 100)
    sparse = np.full(3 * per_day, np.nan)
    sparse[:per_day // 2 - 1] = 1.0                # fewer than half a day: not judged
    assert np.isnan(daily_anomaly(sparse, per_day)).all()
    root = Path(__file__).resolve().parent.parent / "fluxpart"
    defined = [path.name for path in sorted(root.rglob("*.py"))
               if re.search(r"^def _?daily_anomaly\(", path.read_text(encoding="utf-8"),
                            re.MULTILINE)]
    assert defined == ["daily_anomaly.py"]


def _packed_input(manifest):
    """The manifest as a run of the same records from a tar archive records it: the
    input's and the site config's SHA-256 differ, nothing else (measured: the bundle run
    from ``tower.tar`` made with ``tar -cf`` and from ``tower.csv``)."""
    manifest["provenance"]["input"].update(path="../tower.tar", sha256="5" * 64)
    manifest["provenance"]["site_config"]["sha256"] = "c" * 64


_NOTE = "input file 'tower.csv': 2 blank line(s) above the header (line 3) read past"


def _notes_among_warnings(manifest):
    """The manifest as a release before notes were told apart wrote a note."""
    manifest["warnings"].insert(0, f"input: {_NOTE}")
    manifest["provenance"]["reader"]["warnings"].insert(0, _NOTE)


def _notes_apart(manifest):
    """The manifest as this release writes the note: apart, and naming the input relative
    to the result folder (leftovers54), where 0.33.0 named it as the run was given it."""
    manifest["provenance"]["reader"]["notes"] = [_NOTE.replace("'tower.csv'", "'../tower.csv'")]


def test_inputs_whose_bytes_differ_beside_identical_tables_are_the_same_result(
        pristine_bundle, tmp_path, capsys):
    """A result of a tar archive against one of the table unpacked from it, every table
    byte-identical: exit 1 "differ: 2 recorded item(s)" on the input's and the site
    config's SHA-256 before; now "same result", exit 0, both hashes listed apart as facts
    of the run (as versions and the code fingerprint, leftovers52). Beside a table that
    differs, still exit 1 with the hashes listed."""
    first, second = copied_rerun(pristine_bundle, tmp_path, _packed_input)
    report = diff_folders(first, second)
    assert not report.result_items and [i[0] for i in report.run_facts] == ["input"] * 2
    assert main(["diff", str(first), str(second)]) == 0
    out = capsys.readouterr().out
    assert "same result: settings, site, every table (bit for bit)" in out
    assert "only the inputs' bytes differ" in out
    assert "inputs (facts of the run, not of the result" in out
    assert "5" * 64 in out and "c" * 64 in out
    _set_value(second, "annual", "nee", lambda v: v * 1.001)
    assert main(["diff", str(first), str(second)]) == 1
    out = capsys.readouterr().out
    assert "differ: 1 recorded item(s)" in out and "5" * 64 in out


def test_a_reader_note_moved_out_of_the_warnings_is_no_difference(pristine_bundle, tmp_path,
                                                                 capsys):
    """A folder written before the reader told notes apart (the note among the run's and
    the reader's warnings) against one written after (the note apart): exit 1 on three
    fields before (warnings, reader warnings, reader notes), although the tables are
    byte-identical; now one fact of reading, exit 0, either folder first, the input's
    path in the messages compared as the first folder spells it (as verify does). A note whose
    text differs is a fact of reading too; a warning that differs is still a difference."""
    old = tmp_path / "old"
    new = copied_rerun(pristine_bundle, tmp_path, _notes_apart)[1]
    older = copied_rerun(pristine_bundle, old, _notes_among_warnings)[1]
    for first, second, shown in ((older, new, "first 1 among the warnings"),
                                 (new, older, "second 1 among the warnings")):
        report = diff_folders(first, second)
        assert not report.result_items
        assert report.run_facts[0][:2] == ("reading", "notes moved")
        assert main(["diff", str(first), str(second)]) == 0
        out = capsys.readouterr().out
        assert "only the reader's notes differ" in out and shown in out
        assert ("reading", "input named in messages") in [i[:2] for i in report.run_facts]
    _edit_manifest(new, lambda m: m["provenance"]["reader"].update(notes=["other"]),
                   reseal=True)
    report = diff_folders(pristine_bundle / "out", new)
    assert not report.result_items and report.run_facts[0][:2] == ("reading", "notes")
    _edit_manifest(new, lambda m: m["warnings"].append("another"), reseal=True)
    assert diff_folders(older, new).exit_code == 1


def _as_written_by_0_33_0(manifest):
    """The manifest as release 0.33.0 wrote it: no ``night_donor_margin`` (verifyold51's
    means: the key removed from the recorded settings, resealed)."""
    del manifest["config"]["night_donor_margin"]


def test_the_report_of_an_earlier_release_shows_the_setting_that_computed_it(
        pristine_bundle, tmp_path):
    """A 0.33.0 folder's settings table lacked ``night_donor_margin``; it now shows
    "none", the value that computed its tables (``config.ADDED_SETTINGS``, as ``load``
    and ``verify`` take it), marked implied by the release, and ``night_fit_records``
    (recorded only away from its default) at its default. A recorded setting is shown
    as recorded, not marked."""
    from fluxpart.report import _settings_table, read_written

    folder = copied_rerun(pristine_bundle, tmp_path, _as_written_by_0_33_0)[1]
    # the page's settings section is this table (test_report: a default run's page)
    settings = _settings_table(read_written(folder).config)
    margin = re.search(r'data-setting="night_donor_margin" data-implied>([^<]*)<span', settings)
    assert margin and margin.group(1).strip() == "none"
    assert "added in 0.34.0; the release that wrote the folder computed as &quot;none&quot;" \
        in settings
    assert re.search(r'data-setting="night_fit_records" data-implied>all_night ', settings)
    assert re.search(r'data-setting="gapfill_estimate">local_linear<', settings)


def test_diff_names_the_setting_an_earlier_release_computed_with(pristine_bundle, tmp_path):
    """``diff`` of a 0.33.0-like folder (no ``night_donor_margin`` recorded) showed
    "(absent)" against the other's value; it now shows "none" marked implied, and a
    folder that records "none" against it differs by no setting (measured: the
    grassland example with footer rows, run by 0.33.0 and by this code with "none",
    every table byte-identical: exit 1 on five items before, 0 now)."""
    older = copied_rerun(pristine_bundle, tmp_path / "a", _as_written_by_0_33_0)[1]
    report = diff_folders(older, pristine_bundle / "out")
    assert [item for item in report.items if item[0] == "setting"] == [
        ("setting", "night_donor_margin", "none (implied, not recorded)", "threshold_spread")]
    explicit = copied_rerun(pristine_bundle, tmp_path / "b",
                            lambda m: m["config"].update(night_donor_margin="none"))[1]
    assert not [item for item in diff_folders(older, explicit).items if item[0] == "setting"]


def test_a_sun_down_result_round_trips_through_load_verify_and_report(pristine_bundle,
                                                                      tmp_path, capsys):
    """A folder of this release written with ``night_fit_records = "sun_down"`` (recorded,
    as every setting away from its default): ``load`` gives it, ``verify`` reruns it
    bit-identical (its tables differ from the default's, so the rerun took it), and the
    report's settings table and methods state it."""
    import warnings

    from bundles import make_bundle

    import fluxpart
    from fluxpart.pipeline import process_site_config
    from fluxpart.report import _night_fit_records, _settings_table, read_written

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        process_site_config(make_bundle(tmp_path, records=24 * 2 * 20,
                                        extra='night_fit_records = "sun_down"\n')
                            ).write(tmp_path / "out")
    loaded = fluxpart.load(tmp_path / "out")
    assert loaded.config.night_fit_records == "sun_down"
    default = fluxpart.load(pristine_bundle / "out")
    assert default.config.night_fit_records == "all_night"
    assert not loaded.annual["gpp_nighttime"].equals(default.annual["gpp_nighttime"])
    assert main(["verify", str(tmp_path / "out")]) == 0
    assert capsys.readouterr().out.startswith("bit-identical: all 15 tables")
    config = read_written(tmp_path / "out").config
    assert 'data-setting="night_fit_records">sun_down<' in _settings_table(config)
    assert 'night_fit_records = "sun_down", not the default' in _night_fit_records(config)
    assert _night_fit_records(default.config.to_dict()) == ""
