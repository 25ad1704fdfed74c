"""`fluxpart diff A B`: what differs between two result folders and how the budget moved.

Exit statuses are those of the audit contract (DESIGN.md §4.1): 0 same, 1 differ, 2 error.
The moved amounts are checked against plain arithmetic on the stored annual tables.
"""

import json
import shutil

import pytest
from bundles import make_bundle

from fluxpart.cli import main
from fluxpart.diff import diff_folders
from fluxpart.pipeline import process_site_config
from fluxpart.store import read_table


@pytest.fixture(scope="module")
def folders(tmp_path_factory):
    """Two results of one input: default settings, and a wider Rg tolerance of gap filling."""
    root = tmp_path_factory.mktemp("diff")
    first = process_site_config(make_bundle(root, name="a.toml")).write(root / "a")
    second = process_site_config(make_bundle(root, name="b.toml", extra="rg_tolerance = 80.0\n")
                                 ).write(root / "b")
    return root, first, second


def test_same_result_in_two_places_is_the_same(folders, tmp_path, capsys):
    """A copy elsewhere (other relative paths, other run log) is the same: exit 0."""
    _, first, _ = folders
    copy = tmp_path / "nested" / "copy"
    shutil.copytree(first, copy)
    (copy / "run-log.json").write_text("{}")
    assert main(["diff", str(first), str(copy)]) == 0
    assert "same:" in capsys.readouterr().out


def test_setting_and_annual_moves_are_listed(folders, capsys):
    """Another setting: the site config hash, the setting and each moved annual number."""
    _, first, second = folders
    report = diff_folders(first, second)
    assert report.exit_code == 1
    named = {(section, name) for section, name, _, _ in report.items}
    assert ("setting", "rg_tolerance") in named
    assert ("input", "site config SHA-256") in named
    assert ("input", "input file SHA-256") not in named            # same input file
    assert not any(section in ("version", "code", "platform") for section, _ in named)
    a = read_table(first / "annual.parquet")
    b = read_table(second / "annual.parquet")
    year = a.index[0]
    row = report.annual.loc[(year, "nee")]
    assert row["first"] == a.loc[year, "nee"] and row["second"] == b.loc[year, "nee"]
    assert row["change"] == pytest.approx(b.loc[year, "nee"] - a.loc[year, "nee"], rel=1e-12)
    assert row["relative"] == pytest.approx(row["change"] / abs(a.loc[year, "nee"]), rel=1e-12)
    assert main(["diff", str(first), str(second)]) == 1
    out = capsys.readouterr().out
    assert "setting rg_tolerance" in out and "first 50.0" in out and "second 80.0" in out
    # only the site config's SHA-256 differs among the inputs: named so (review75: "the
    # inputs' bytes differ" sent the reader to the input file)
    assert "; the site config's bytes differ in 1 fact(s) of the run" in out


def test_another_seed_is_listed_once():
    """Behaviour check (review round eighteen): the manifest records the seed as the
    setting `seed` and as its own field; a rerun with another seed was listed twice, as
    "setting seed" and "seed seed". Where the field equals the setting it is listed once;
    a seed field that disagrees with its own setting (an edited manifest) is still named."""
    from fluxpart.diff import _recorded_items

    first = {"config": {"seed": 0, "rg_tolerance": 50.0}, "seed": 0}
    second = {"config": {"seed": 7, "rg_tolerance": 50.0}, "seed": 7}
    named = [(section, name, a, b) for section, name, a, b in _recorded_items(first, second)]
    assert named == [("setting", "seed", "0", "7")]
    edited = {"config": {"seed": 0, "rg_tolerance": 50.0}, "seed": 7}
    assert ("seed", "seed", "0", "7") in _recorded_items(first, edited)


def test_a_result_without_an_input_file_is_shown_as_none():
    """A demo result records a demo seed and no input file; against a run of a site
    config the diff showed "first []" and "demo record ... second null" (review46, the
    demo against the example run): values a user reads as code. They are "none"."""
    from fluxpart.diff import _recorded_items

    demo = {"provenance": {"demo": {"seed": 0, "variant": "c3", "as_recorded": True}}}
    run = {"provenance": {"input": {"path": "../tower.csv", "sha256": "ab" * 32}}}
    items = {(section, name): (a, b) for section, name, a, b in _recorded_items(demo, run)}
    assert items[("input", "input file SHA-256")] == ("none", "ab" * 32)
    assert items[("input", "demo record")][1] == "none"
    assert not any("[]" in a + b or "null" in a + b for a, b in items.values())


def test_a_field_that_is_its_own_section_is_named_once():
    """The diff printed "warnings warnings ..." and "seed seed ..." (section and field of
    the same name) where other lines read "setting seed" (review25): such a field is named
    once, and every line's values still start in one column."""
    from pathlib import Path

    from fluxpart.diff import DiffReport

    report = DiffReport(Path("a"), Path("b"), items=(
        ("warnings", "warnings", "[]", '["events: ..."]'), ("seed", "seed", "0", "7"),
        ("setting", "events", "(absent)", '["2021-07-20"]')))
    lines = report.format().splitlines()[2:5]
    assert lines[0].startswith("  warnings ") and "warnings warnings" not in lines[0]
    assert lines[1].startswith("  seed ") and "seed seed" not in lines[1]
    assert lines[2].startswith("  setting events ")
    assert len({line.index(" first ") for line in lines}) == 1


def test_two_sites_are_said_to_be_no_rerun(folders, capsys):
    """Folders of two towers: a note under the count says the annual moves compare two
    sites (review, round five); two results of one site get no such note."""
    from pathlib import Path

    from fluxpart.diff import DiffReport

    report = DiffReport(Path("a"), Path("b"), items=(
        ("site", "name", "Fernwick Hollow (fictional)", "Tarnby Mire (fictional)"),))
    lines = report.format().splitlines()
    assert lines[2] == ("note: the folders hold two sites (first Fernwick Hollow (fictional), "
                        "second Tarnby Mire (fictional)): the annual values below compare "
                        "two sites, not a result and its rerun")
    _, first, second = folders
    assert "note:" not in diff_folders(first, second).format()


def test_versions_code_and_platform_are_named(folders, tmp_path):
    """Edited (and resealed) version, code fingerprint and CPU features show up by name."""
    from fluxpart.manifest import manifest_seal

    _, first, _ = folders
    other = tmp_path / "other"
    shutil.copytree(first, other)
    path = other / "manifest.json"
    manifest = json.loads(path.read_text())
    manifest["versions"]["numpy"] = "0.0.1"
    manifest["code"]["sha256"] = "0" * 64
    manifest["platform"]["numpy_cpu_features"] = [
        f for f in manifest["platform"]["numpy_cpu_features"] if f != "AVX2"] + ["NEON"]
    manifest["seal"] = manifest_seal(manifest)
    path.write_text(json.dumps(manifest, indent=2))
    report = diff_folders(first, other)
    named = {(section, name.split(" ")[0]) for section, name, _, _ in report.items}
    assert {("version", "numpy"), ("code", "fingerprint"),
            ("platform", "numpy_cpu_features")} <= named
    # facts of the run, not of the result: every table is byte-identical (leftovers52)
    assert report.annual.empty and report.exit_code == 0 and not report.result_items


def test_a_folder_that_does_not_match_its_manifest_is_an_error(folders, tmp_path, capsys):
    """diff refuses a tampered folder (exit 2, the file named) and a missing one."""
    _, first, _ = folders
    other = tmp_path / "other"
    shutil.copytree(first, other)
    (other / "extra.parquet").write_bytes(b"")
    assert main(["diff", str(first), str(other)]) == 2
    assert "extra.parquet" in capsys.readouterr().err
    assert main(["diff", str(first), str(tmp_path / "nowhere")]) == 2


def test_a_model_choice_the_data_made_differently_is_named(folders):
    """Two runs whose night data chose another respiration temperature, delay or form weight
    (the partitioned sums move with it) name each choice under "model"; the folders'
    own manifests, which agree on them, name none."""
    from fluxpart.diff import _recorded_items

    _, first, second = folders
    a = json.loads((first / "manifest.json").read_text())
    b = json.loads((second / "manifest.json").read_text())
    assert not any(section == "model" for section, *_ in _recorded_items(a, a))
    b["provenance"]["respiration_driver"] = {**a["provenance"]["respiration_driver"],
                                             "chosen": "other", "delay_hours": 3.0}
    b["provenance"]["respiration_form"] = {**a["provenance"]["respiration_form"],
                                           "exponential_weight": 0.25}
    model = {name: (x, y) for section, name, x, y in _recorded_items(a, b)
             if section == "model"}
    assert model["respiration_driver chosen"][1] == "other"
    assert model["respiration_driver delay_hours"][1] == "3.0"
    assert model["respiration_form exponential_weight"][1] == "0.25"


def test_a_long_label_wraps_and_its_values_follow_at_one_indentation():
    """A label over 40 characters (a table's metadata named) was printed on one line
    with its values, out of the column of the others (leftovers49): it now takes lines
    of its own, each at most 80 characters (a terminal's common width), and its values
    follow at VALUE_INDENT, whatever else is listed (leftovers51: they started in the
    other items' column, so a table's hashes moved with the labels beside them); the
    short labels' values keep their column. A word is never broken
    (polish49; leftovers49 split a 70-character value over two lines): a SHA-256 split
    in two must be joined by hand before it can be compared or copied, so a word longer
    than the width runs past it, whole, on a line of its own."""
    from pathlib import Path

    from fluxpart.diff import VALUE_INDENT, DiffReport

    long = "parameters_nighttime_e0_annual.parquet metadata fluxpart_columns_and_units"
    sha = "9f" * 32                                  # a SHA-256 in hex: 64 characters
    report = DiffReport(Path("a"), Path("b"), items=(
        ("seed", "seed", "0", "7"), ("format", long, "x" * 30, sha),
        ("setting", "events", "(absent)", '["2021-07-20"]')))
    lines = report.format().splitlines()[2:]
    column = lines[0].index("first ")
    assert lines[3].index("first ") == VALUE_INDENT == lines[4].index("second")
    after = next(line for line in lines if "events" in line)
    assert after.index("first ") == column         # the item after it is still aligned
    assert all(len(line) <= 80 for line in lines[:lines.index(after) + 1])
    assert " ".join(line.strip() for line in lines[1:3]) == f"format {long}"
    assert "x" * 30 in lines[3] and lines[4].strip() == f"second {sha}"   # whole
    path = "/" + "p" * 90                            # a word longer than the width
    report = DiffReport(Path("a"), Path("b"), items=(("format", long, "x", path),))
    lines = report.format().splitlines()[2:7]         # the item's five lines
    over = [line for line in lines if len(line) > 80]
    assert [line.strip() for line in over] == [path]  # only the unbreakable word runs over
    assert lines[lines.index(over[0]) - 1].strip() == "second"


def test_float_noise_reads_equal_within_rounding_not_as_a_move():
    """review55: a spread that changed by 4.5e-13 between two runs (1.87449 -> 1.87449)
    was listed as a move. A float64 carries about 16 significant digits, and another
    order of additions moves a year's sum in its last digits (Goldberg 1991, "What every
    computer scientist should know about floating-point arithmetic" (m)): within the
    relative tolerance verify calls rounding (1e-6) it reads as equal within rounding,
    named and counted, while a change of 1e-5 relative is still a move."""
    from pathlib import Path

    import pandas as pd

    from fluxpart.diff import DiffReport, _annual_moves
    from fluxpart.verify import ROUNDING_TOLERANCE

    spread = 1.874490123456789
    first = pd.DataFrame({"nee": [-241.7], "gpp_daytime_ustar_spread": [spread],
                          "reco_nighttime": [1178.8]}, index=pd.Index([2023], name="year"))
    second = first.assign(gpp_daytime_ustar_spread=spread + 4.5e-13,
                          reco_nighttime=1178.8 * (1 + 10 * ROUNDING_TOLERANCE))
    moves, same, rounding = _annual_moves(first, second)
    assert list(moves.index) == [(2023, "reco_nighttime")]         # 1e-5 relative: a move
    assert rounding == [(2023, "gpp_daytime_ustar_spread")] and same == 1
    text = DiffReport(Path("a"), Path("b"), annual=moves,
                      same_annual=same, rounding_annual=tuple(rounding)).format()
    assert "gpp_daytime_ustar_spread" not in text.split("annual values equal in both")[0]
    assert "equal within rounding" in text and "1 (2023 gpp_daytime_ustar_spread)" in text


def test_a_zero_part_against_its_float_residue_is_no_move():
    """faults46 (left by auditor53): a part that is zero in one folder and a float residue
    (9.46e-23 g C m-2) in the other was listed as a move of -100 %, because a year is one
    row and verify's near-zero rule (a value judged against 1e-3 of its column's largest
    magnitude) had no column. The year's largest magnitude in the same unit stands in: a
    float64 sum of values of magnitude M rounds at about 2.2e-16 M (IEEE 754 binary64
    machine epsilon; Higham 2002, section 1.7 (m)), so 9.46e-23 beside GPP 1419 is
    rounding, while 0.5 g C m-2 of the same part and a 1e-5 relative move of Reco stay
    moves, and a value of another unit gets no such floor."""
    import pandas as pd

    from fluxpart.diff import _annual_moves

    year = pd.Index([2021], name="year")
    first = pd.DataFrame({"gpp_nighttime": [1419.4], "reco_nighttime": [1178.8],
                          "reco_uncertainty_temperature_driver": [0.0],
                          "reco_uncertainty_respiration_form": [0.0],
                          "ustar_threshold": [0.0]}, index=year)
    first.attrs["units"] = {**dict.fromkeys(list(first.columns)[:4], "g C m-2"),
                            "ustar_threshold": "m s-1"}
    second = first.assign(reco_uncertainty_temperature_driver=9.46e-23,
                          reco_uncertainty_respiration_form=0.5,
                          reco_nighttime=1178.8 * (1 + 1e-5), ustar_threshold=1e-9)
    second.attrs = dict(first.attrs)
    moves, same, rounding = _annual_moves(first, second)
    assert rounding == [(2021, "reco_uncertainty_temperature_driver")]
    assert sorted(column for _, column in moves.index) == [
        "reco_nighttime", "reco_uncertainty_respiration_form", "ustar_threshold"]
    assert same == 1


def test_a_value_blown_up_in_one_folder_hides_no_move_of_another():
    """review75: the year's scale of a unit was the largest magnitude in either folder, so
    a value blown up in one (a fit gone astray: GPP 1.4e12 g C m-2) made a real move of
    NEE by 50 g C m-2 (21 %) "equal within rounding" (1e-6 of 1e-3 of 1.4e12). The scale is
    now the magnitude both folders share: NEE is a move, the residue still rounding."""
    import pandas as pd

    from fluxpart.diff import _annual_moves

    year = pd.Index([2021], name="year")
    first = pd.DataFrame({"gpp_nighttime": [1419.4], "nee": [-240.6],
                          "reco_uncertainty_respiration_form": [0.0]}, index=year)
    first.attrs["units"] = dict.fromkeys(first.columns, "g C m-2")
    second = first.assign(gpp_nighttime=1.4e12, nee=-190.6,
                          reco_uncertainty_respiration_form=9.46e-23)
    second.attrs = dict(first.attrs)
    moves, _, rounding = _annual_moves(first, second)
    assert sorted(column for _, column in moves.index) == ["gpp_nighttime", "nee"]
    assert rounding == [(2021, "reco_uncertainty_respiration_form")]


def test_each_annual_move_names_its_unit_and_text_keeps_its_signs(folders, capsys):
    """Behaviour check (review63, a modeller's diff of a changed setting): the moves table
    put -0.27 of NEE (g C m-2), 0.012 of the u* threshold (m s-1) and -0.009 of a share
    side by side with no unit ("units of each column" named none), and a warning's "±"
    was shown as the JSON escape "\\u00b1". Each move now carries the column's unit as
    people read it (the carbon and CO2 units with their substance), taken from the stored
    table's own metadata, and text is shown as written."""
    from fluxpart.diff import _shown_pair
    from fluxpart.units import display_unit

    _, first, second = folders
    report = diff_folders(first, second)
    stored = read_table(first / "annual.parquet").attrs["units"]
    for (_, column), unit in report.annual["unit"].items():
        assert unit == display_unit(stored[column])
    assert report.annual.loc[(report.annual.index[0][0], "nee"), "unit"] == "g C m-2"
    assert _shown_pair(["E0 267 ± 29 K"], ["E0 265 ± 34 K"]) == ('["E0 267 ± 29 K"]',
                                                                  '["E0 265 ± 34 K"]')
    main(["diff", str(first), str(second)])
    out = capsys.readouterr().out
    assert "\\u00b1" not in out and " unit " in out.split("How the annual numbers moved")[1]


def test_two_long_values_that_differ_late_show_where_they_differ():
    """Behaviour check (review63): two runs' warnings alike for their first 117
    characters were shown as two equal cut texts, "first [...] second [...]", under
    "differ". Where the common start would hide the difference both are shown from a
    little before their first differing character; short values are shown whole."""
    from fluxpart.diff import SHOWN_CHARACTERS, _recorded_items

    alike = "nighttime partitioning: the E0 of 2022 rests on few nights: " * 3
    first = {"warnings": [alike + "0 of its 72 E0 windows were accepted"]}
    second = {"warnings": [alike + "1 of its 72 E0 windows were accepted"]}
    [(section, _, a, b)] = _recorded_items(first, second)
    assert section == "warnings" and a != b
    assert a.startswith("...") and "0 of its 72" in a and "1 of its 72" in b
    assert len(a) <= SHOWN_CHARACTERS and len(b) <= SHOWN_CHARACTERS
    [(_, _, a, b)] = _recorded_items({"warnings": ["short"]}, {"warnings": ["other"]})
    assert (a, b) == ('["short"]', '["other"]')
