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
