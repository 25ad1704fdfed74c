"""Small things users met in round leftovers61 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import shutil

from fluxpart.cli import main


def _killed_between_two_renames(folder):
    """What a run killed between the two renames of its swap leaves (no atomic exchange:
    NFS, SMB, FUSE): no folder, the earlier result in its retired copy, the new one in a
    staging folder (as tests/test_robustness_faults40.py builds it)."""
    parent = folder.parent
    shutil.copytree(folder, parent / f".{folder.name}.staging-k1ll3d00")
    folder.rename(parent / f".{folder.name}.retired-k1ll3d00")


def test_quiet_verify_says_that_it_repaired_the_folder(copy, capsys):
    """`verify --quiet` of a folder an interrupted swap left aside: the earlier result is
    put back, and the one-line verdict said nothing of it (the note was among those
    --quiet hides). Common practice: a repair of a user's folder is reported; an
    auditor must know the folder verified is not the one found. Exit code unchanged."""
    folder = copy / "out"
    _killed_between_two_renames(folder)
    assert main(["verify", str(folder), "--quiet"]) == 0
    out = capsys.readouterr().out.splitlines()
    repaired = [line for line in out if line.startswith("note: ") and "was missing" in line]
    assert len(repaired) == 1 and ".out.retired-k1ll3d00" in repaired[0], out
    assert out[0].startswith("bit-identical") and out[-1].startswith("Caution:")
    # the second verify finds nothing to repair: the note is not said again
    assert main(["verify", str(folder), "--quiet"]) == 0
    again = capsys.readouterr().out
    assert "note:" not in again and again.count("\n") == 3


def test_quiet_verify_keeps_a_run_stopped_beside_the_folder_and_hides_other_notes(
        copy, capsys):
    """A staging folder beside the result (a run into it running or stopped): the
    verdict may be of the earlier result, which the full output's note says; --quiet
    now says it too. The report page's note (present in every folder with a report/)
    stays quiet: it does not change what the verdict covers."""
    folder = copy / "out"
    (copy / ".out.staging-0000stop").mkdir()
    (folder / "report").mkdir()
    assert main(["verify", str(folder)]) == 0
    full = capsys.readouterr().out
    assert "report/: the page" in full and "running now or was stopped" in full
    assert main(["verify", str(folder), "--quiet"]) == 0
    quiet = capsys.readouterr().out
    assert "running now or was stopped" in quiet
    assert "report/: the page" not in quiet


def test_verify_names_the_folder_resolved(copy, capsys):
    """`verify auditor/../out` printed the folder as typed; the verdict line and its notes
    now name it as on disk (pathlib.Path.resolve, Python documentation (m)). Nothing of
    the folder changes: a second verify is bit-identical too."""
    folder = copy / "out"
    (copy / "auditor").mkdir()
    winding = copy / "auditor" / ".." / "out"
    _killed_between_two_renames(folder)
    assert main(["verify", str(winding)]) == 0
    out = capsys.readouterr().out
    head, notes = out.splitlines()[0], [line for line in out.splitlines()
                                       if line.startswith("note: ")]
    resolved = str(folder.resolve())
    assert f"of {resolved} " in head and ".." not in head, head
    assert any(repr(resolved) in note for note in notes) and ".." not in " ".join(notes)
    assert main(["verify", "--json", str(winding)]) == 0
    import json

    assert json.loads(capsys.readouterr().out)["directory"] == resolved


def _fill_figure(codes, index):
    """The fill-quality figure of a written time series holding only fill codes, and the
    matplotlib axes it drew (as tests/test_report.py's `_painted`)."""
    import pandas as pd

    from fluxpart import figures

    written = figures.Written(manifest={}, tables={"timeseries": pd.DataFrame(
        {"nee_fill_quality": codes}, index=index)})
    drawing = figures.Drawing()
    made = []
    draw = drawing.figure
    drawing.figure = lambda *a, **k: made.append(draw(*a, **k)) or made[-1]
    with drawing.mpl.rc_context():
        figures.figure_fill_quality(drawing, written, 30)
    return made[0].axes


def test_fill_quality_figure_names_its_hatch_apart_from_measured():
    """The title spoke of a "grey hatch" for records missing from the file while the
    "measured" class was light grey (#e8e8e8) too. Now "measured" has a hue (not grey:
    its red, green and blue differ) and the hatch has a legend entry drawn as the top
    panel draws it; a file without missing records names no hatch. Colour-blind-safe
    hues: Okabe & Ito (2008), "Color Universal Design" (m)."""
    import numpy as np
    import pandas as pd
    from matplotlib.colors import to_rgb

    index = pd.date_range("2021-01-01 00:00", periods=48 * 20, freq="30min")
    codes = np.tile([0, 0, 1, 2, 0, 3], len(index) // 6).astype(float)
    kept = np.ones(len(index), bool)
    kept[48 * 5:48 * 8] = False                       # three days absent from the file
    top, bottom = _fill_figure(codes[kept], index[kept])
    assert "grey hatch: no record in the file" in top.get_title(loc="left")
    legend = bottom.get_legend()
    labels = [t.get_text() for t in legend.get_texts()]
    assert "measured" in labels and any("no record in the file" in t for t in labels)
    patches = dict(zip(labels, legend.get_patches(), strict=True))
    measured = to_rgb(patches["measured"].get_facecolor())
    hatch = patches[next(t for t in labels if "no record" in t)]
    assert max(measured) - min(measured) > 0.05, measured          # not a grey
    face = to_rgb(hatch.get_facecolor())
    assert hatch.get_hatch() and max(face) - min(face) < 0.01       # the grey hatch
    # the same records without a gap: no hatch named anywhere
    top, bottom = _fill_figure(codes, index)
    assert "hatch" not in top.get_title(loc="left")
    assert not any("no record" in t.get_text() for t in bottom.get_legend().get_texts())


def test_a_window_replaced_for_its_respiration_is_worded_for_a_reader():
    """A light-response panel's title and the page's window table showed the daytime
    method's phrase "rref differs from night rref; refit with night rref". Now they say
    what it means: the respiration fitted by day (Rref, at 10 °C: Lloyd & Taylor 1994
    (m)) is unlike the night's, and the window was refitted with the night's (Lasslop et
    al. 2010 fix it so (m)). The written table keeps the method's phrase."""
    import pandas as pd

    from fluxpart import figures
    from fluxpart.report import _windows_html

    parameters = pd.DataFrame({
        "status": ["accepted", "replaced", "replaced", "rejected"],
        "reason": ["ok", "rref differs from night rref; refit with night rref",
                   "rref not resolved by the daytime data; refit with night rref",
                   "too few daytime records"],
        "window_start": pd.to_datetime(["2021-06-01", "2021-06-05", "2021-06-09",
                                        "2021-06-13"]),
        "window_end": pd.to_datetime(["2021-06-05", "2021-06-09", "2021-06-13",
                                      "2021-06-17"]),
        "beta0": [30.0, 25.0, 20.0, float("nan")]})
    why = figures.window_status(parameters)["why"].tolist()
    assert why[1] == "day respiration unlike the night's; refitted with night respiration"
    assert why[2] == "day records do not fix respiration; refitted with night respiration"
    assert why[3] == "too few daytime records"            # other reasons as written
    assert not any("rref" in text for text in why)
    page = _windows_html(figures.Written(manifest={}, tables={"parameters_daytime":
                                                               parameters}), {})
    assert "day respiration unlike the night&#x27;s" in page or \
        "day respiration unlike the night's" in page
    assert "rref differs" not in page and "night rref" not in page
    assert parameters["reason"][1] == "rref differs from night rref; refit with night rref"


def test_a_middle_grade_rejected_under_the_default_flag_accept_is_named(tmp_path, capsys):
    """A graded flag (0 best, 1 usable for budgets, 2 discard: the 0-1-2 scheme of Mauder
    & Foken 2004 (m)) under the default flag_accept = [0] rejected 40 % of the records
    holding an NEE value and `check` listed no problem (the reader warned from half on).
    Now `check` names the column, the kept codes, the share and the setting that keeps
    grade 1; with flag_accept = [0, 1] it is silent. A flag of two codes (0 kept, 2
    rejected) rejecting as many is not named: nothing to widen."""
    import numpy as np
    import pandas as pd
    from bundles import make_bundle

    from fluxpart.flag_grades import middle_grade_warning, middle_grades

    # the pure rule: which codes lie between the one kept grade and the worst
    assert middle_grades(np.array([0.0, 1, 2, np.nan]), (0,)) == [1.0]
    assert middle_grades(np.array([0.0, 1, 2]), (2,)) == [1.0]         # reversed scale
    assert middle_grades(np.array([0.0, 1, 2]), (0, 1)) == []          # usable kept
    assert middle_grades(np.array([0.0, 2]), (0,)) == []               # two codes
    assert middle_grades(np.arange(1.0, 10), (1, 2, 3, 4, 5, 6)) == []  # 1-9, 1-6 kept
    nee = np.ones(9)
    codes = np.array([0.0, 0, 0, 0, 0, 1, 1, 1, 2])                     # 4 of 9 rejected
    rejected = (codes != 0).astype(float)
    text = middle_grade_warning([codes], ["qc"], (0,), nee, rejected)
    assert "4 of 9 records" in text and "1 (3 records)" in text
    assert "flag_accept = [0, 1]" in text
    codes = np.array([0.0, 0, 0, 0, 0, 0, 1, 1, 2])                     # 3 of 9: a third
    assert middle_grade_warning([codes], ["qc"], (0,), nee, (codes != 0).astype(float)) == ""

    config = make_bundle(tmp_path / "site")
    table = pd.read_csv(tmp_path / "site" / "tower.csv", dtype=str)
    grade = np.where(np.arange(len(table)) % 5 < 2, "1", "0")
    grade[::97] = "2"
    table["qc_co2"] = grade
    table.to_csv(tmp_path / "site" / "tower.csv", index=False)
    main(["check", str(config)])
    out = capsys.readouterr().out
    named = [line for line in out.splitlines() if "flag_accept = [0, 1]" in line]
    assert len(named) == 1 and "qc_co2" in named[0] and "flag_accept = [0]" in named[0], out
    assert "more than a third" in named[0]
    text = config.read_text().replace("missing = [-9999]\n",
                                      "missing = [-9999]\nflag_accept = [0, 1]\n")
    config.write_text(text)
    main(["check", str(config)])
    assert "more than a third" not in capsys.readouterr().out
    table["qc_co2"] = np.where(grade == "1", "2", grade)               # two codes: 0, 2
    table.to_csv(tmp_path / "site" / "tower.csv", index=False)
    config.write_text(text.replace("flag_accept = [0, 1]\n", ""))
    main(["check", str(config)])
    assert "more than a third" not in capsys.readouterr().out


def _calls(code: str, name: str):
    """Each call `name(...)` in `code` with its balanced arguments."""
    import re

    for found in re.finditer(rf"(?<![\w.-]){re.escape(name)}\(", code):
        depth, position = 0, found.end() - 1
        for position in range(found.end() - 1, len(code)):
            depth += {"(": 1, ")": -1}.get(code[position], 0)
            if depth == 0:
                break
        yield code[found.start():position + 1]


def test_every_documented_block_that_opens_text_names_its_encoding():
    """The README's audit block opened the manifest with `open()` in the platform's
    default encoding (a Windows code page misreads a non-ASCII site config; Python
    documentation, `open`: "the default encoding is platform dependent" (m), PEP 597).
    Every code block of README.md, docs/ and examples/README.md that opens a file as
    text (open, Path.read_text, Path.write_text) now passes encoding="utf-8"; the README
    block is also run by tests/test_newuser57.py."""
    import re
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    pages = [root / "README.md", root / "examples" / "README.md",
             *sorted((root / "docs").glob("*.md"))]
    seen = []
    for page in pages:
        text = page.read_text(encoding="utf-8")
        for block in re.findall(r"```[a-z]*\n(.*?)```", text, flags=re.S):
            for name in ("open", ".read_text", ".write_text"):
                for call in _calls(block, name):
                    if re.search(r"""['"][rwax+]*b[rwax+]*['"]""", call):
                        continue                             # binary: no encoding
                    seen.append(call)
                    assert re.search(r"encoding\s*=\s*['\"]utf-8['\"]", call), (page.name, call)
    assert len(seen) >= 2            # the audit block reads the manifest, writes the config


def test_a_decimal_comma_split_by_the_delimiter_is_named_with_its_column(tmp_path, capsys):
    """'1,0' in single quotes (no CSV quotes: RFC 4180 quotes with the double quote
    (m)) or unquoted in a comma-delimited file is two fields; the reader named only the
    field count and "a delimiter inside a value". Now the one error line names the
    column, the value and both remedies the reader supports (a full stop, or double
    quotes with decimal = ","). A whole-number column with one field too many stays
    unnamed (it may be a column the line has in excess)."""
    import pandas as pd
    from bundles import make_bundle

    from fluxpart.comma_fields import split_decimal_comma

    lines = ["stamp,nee,tair,qc", "202101010030,0.5,-7.46,0", "202101010100,0.4,'1,0',0"]
    text = split_decimal_comma("t.csv", lines, 0, 1)
    assert "line 3 has 5 fields" in text and "column 'tair'" in text
    assert "(1.0)" in text and 'decimal = ","' in text and '("1,0")' in text
    assert "column 'tair'" in split_decimal_comma(
        "t.csv", [*lines[:2], "202101010100,0.4,\u201c1,0\u201d,0"], 0, 1)
    assert "column 'tair'" in split_decimal_comma(
        "t.csv", [*lines[:2], "202101010100,0.4,1,0,0"], 0, 1)       # unquoted, fractions
    assert split_decimal_comma("t.csv", [*lines[:2], "202101010100,0.4,-7.5,0,5"],
                               0, 1) is None                           # qc holds integers
    assert split_decimal_comma("t.csv", lines[:2], 0, 1) is None       # nothing split

    config = make_bundle(tmp_path / "site")
    table = pd.read_csv(tmp_path / "site" / "tower.csv", dtype=str)
    rows = table.to_csv(index=False).splitlines()
    fields = rows[5].split(",")
    fields[3] = "'1,0'"                                                # air_temp_c
    rows[5] = ",".join(fields)
    (tmp_path / "site" / "tower.csv").write_text("\n".join(rows) + "\n")
    assert main(["check", str(config)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    assert "column 'air_temp_c'" in err[0] and 'decimal = ","' in err[0]
