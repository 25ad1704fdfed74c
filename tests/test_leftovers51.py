"""Leftovers of session 50 (round leftovers51): ``diff`` of an auditor's rerun on another
CPU; diff's hash lines at one indentation.

Outside facts, each named beside its check: ``numpy.nextafter`` moves a value to the
adjacent double (IEEE 754), the difference another CPU's order of additions gives; the
CPU features and BLAS architecture recorded are those NumPy reports (NumPy documentation,
``numpy._core._multiarray_umath.__cpu_features__`` (m); threadpoolctl's
``threadpool_info`` (m)). The result folders are the session's invented bundle.
"""
import shutil

import numpy as np
import pytest
from test_verify import _edit_manifest, _set_value

from fluxpart.cli import main
from fluxpart.diff import VALUE_INDENT, diff_folders


def _other_cpu(manifest):
    """The manifest's platform as another CPU records it: AVX-512 absent, another BLAS
    kernel architecture."""
    platform = manifest["platform"]
    platform["numpy_cpu_features"] = [f for f in platform["numpy_cpu_features"]
                                      if not f.startswith("AVX512")] + ["AVX2"]
    platform["numpy_cpu_features"] = sorted(set(platform["numpy_cpu_features"]))
    for entry in platform.get("blas") or []:
        entry["architecture"] = "SkylakeX" if entry.get("architecture") != "SkylakeX" \
            else "Haswell"
    platform["machine"] = "x86_64" if platform.get("machine") != "x86_64" else "amd64"


def copied_rerun(pristine_bundle, tmp_path, change):
    """The session bundle's folder and a copy whose manifest `change` edits (resealed)."""
    first = pristine_bundle / "out"
    second = tmp_path / "rerun"
    shutil.copytree(first, second)
    _edit_manifest(second, change, reseal=True)
    return first, second


@pytest.fixture
def rerun(pristine_bundle, tmp_path):
    """The session bundle's folder and a copy whose manifest records another CPU."""
    return copied_rerun(pristine_bundle, tmp_path, _other_cpu)


def test_platform_facts_alone_are_no_difference_of_the_result(rerun, capsys):
    """Tables bit-identical, only the platform differs: "differ: 3 recorded item(s)",
    exit 1 before (review59), although the result is the same and verify says the
    platform differs beside a reproduced result. Now "same result", exit 0, the platform
    facts listed under their own heading."""
    first, second = rerun
    report = diff_folders(first, second)
    assert report.platform_facts and not report.result_items
    assert report.exit_code == 0
    assert main(["diff", str(first), str(second)]) == 0
    out = capsys.readouterr().out
    assert "same result:" in out and "only the platform differs" in out
    assert "differ:" not in out
    heading = out.splitlines().index("platform (facts of the run, not of the result):")
    listed = out.splitlines()[heading + 1:]
    assert any(line.startswith("  numpy_cpu_features (") and "only in the first" in line
               for line in listed)
    assert any(line.startswith("  blas") for line in listed)


def test_values_within_rounding_on_another_platform_are_equal_within_rounding(rerun, capsys):
    """The auditor's rerun on another CPU: values moved to the adjacent double (IEEE 754)
    and the platform differs: "differ: 4 recorded item(s)", exit 1 before; now "equal
    within rounding", exit 0, as verify's "reproduced within floating-point rounding;
    the platform differs"; a value beyond rounding still differs (exit 1)."""
    first, second = rerun
    _set_value(second, "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))
    assert main(["diff", str(first), str(second)]) == 0
    out = capsys.readouterr().out
    assert "equal within rounding:" in out and "the platform differs (listed below)" in out
    assert "platform (facts of the run, not of the result):" in out
    _set_value(second, "daily", "nee", lambda v: v * 1.001)
    assert main(["diff", str(first), str(second)]) == 1
    out = capsys.readouterr().out
    assert "differ: 1 recorded item(s)" in out
    assert "the platform differs in " in out and "fact(s) of the run, listed apart" in out


@pytest.mark.parametrize("tables", ["identical", "within rounding"])
def test_a_setting_that_differs_exits_1_whatever_the_platform(rerun, tables):
    """A setting recorded otherwise is a difference of the result: exit 1 with the tables
    bit-identical or within rounding, the platform differing too."""
    first, second = rerun
    if tables == "within rounding":
        _set_value(second, "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))
    _edit_manifest(second, lambda m: m["config"].update(rg_tolerance=80.0), reseal=True)
    report = diff_folders(first, second)
    assert ("setting", "rg_tolerance") in [(s, n) for s, n, _, _ in report.result_items]
    assert report.exit_code == 1
    assert report.format().splitlines()[1].startswith("differ: ")


def test_values_under_a_long_label_have_one_indentation(rerun):
    """A table's hashes under its long label started in the column of the other items'
    values (4 spaces alone, 24 beside "setting rg_tolerance": review59); now always
    VALUE_INDENT, whatever else is listed."""
    first, second = rerun
    _set_value(second, "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))

    def indents(text):
        return {len(line) - len(line.lstrip()) for line in text.splitlines()
                if line.lstrip().startswith(("first ", "second "))}

    alone = diff_folders(first, second).format()
    _edit_manifest(second, lambda m: m["config"].update(rg_tolerance=80.0), reseal=True)
    beside = diff_folders(first, second).format()
    hashes = [line for line in beside.splitlines() if line.strip().startswith("first ")
              and "setting" not in line]
    assert indents(alone) == {VALUE_INDENT}
    assert {len(line) - len(line.lstrip()) for line in hashes} == {VALUE_INDENT}


def test_sites_lost_with_the_scheduler_are_told_in_one_line():
    """An external Dask scheduler killed printed the same error line once per lost site
    (faults40: three lines for three sites). A client that loses its scheduler cancels
    every future it holds (Dask.distributed documentation, "Futures" (m)), so every
    pending site fails in the same words: one line with the count and each site named;
    a site that failed otherwise keeps its own line, an internal error its traceback."""
    from concurrent.futures import CancelledError

    from fluxpart import batch

    def common(key):
        return {"key": key, "config": f"/net/{key}.toml", "directory": f"/res/{key}"}

    lost = [batch._failure(common(key), batch.scheduler_lost_error(
        "tcp://10.0.0.5:8786", CancelledError("scheduler-connection-lost")))
        for key in ("alpha", "beta", "gamma")]
    other = batch._failure(common("delta"), batch.InputFileError("tower.csv: no rows"))
    internal = batch._failure(common("eps"), ZeroDivisionError("division by zero"))
    written = batch.SiteOutcome(key="zeta", config="/net/zeta.toml", directory="/res/zeta",
                                status="written")
    lines = batch._failure_lines([lost[0], other, lost[1], written, internal, lost[2]])
    assert lines[0].startswith("error: 3 sites failed alike, 'alpha' (/net/alpha.toml), "
                               "'beta' (/net/beta.toml), 'gamma' (/net/gamma.toml): "
                               "SchedulerLostError, each: the connection to the Dask "
                               "scheduler at tcp://10.0.0.5:8786 was lost")
    assert lines[1] == "error: site 'delta' (/net/delta.toml): InputFileError: tower.csv: no rows"
    assert lines[2].startswith("error: site 'eps' (/net/eps.toml): ZeroDivisionError")
    assert internal.traceback and lines[3] == internal.traceback and len(lines) == 4
    assert batch._failure_lines(lost[:1])[0].startswith("error: site 'alpha' (")


def listable_stages() -> set:
    """Every stage label the package can give a finding: a literal in ``Finding(...)``, a
    module's ``STAGE``, the constant-variable stages; a column's name as ``<column>``."""
    import re
    from pathlib import Path

    import fluxpart
    from fluxpart import preflight

    stages = set(stage for stage, _ in preflight._CONSTANT.values())
    for path in Path(fluxpart.__file__).parent.glob("*.py"):
        source = path.read_text(encoding="utf-8")
        stages |= set(re.findall(r'Finding\(\s*f?"([^"]+)"', source))
        stages |= set(re.findall(r'^STAGE = "([^"]+)"', source, re.M))
    return {re.sub(r"\{name\}", "<column>", stage) for stage in stages}


def test_every_stage_the_preflight_can_list_is_in_its_docstring():
    """The preflight docstring's list of conditions lacked a dozen findings added by later
    rounds (rg dark, rg zeros, tair flat, weather pairing, spliced records, ...: review59).
    Every stage label the package can give a finding (a literal in ``Finding(...)``, a
    module's ``STAGE``, the constant-variable stages, a label with a column's name as
    ``<column>``) must be named there."""
    from fluxpart import preflight

    text = " ".join(preflight.__doc__.split())
    stages = listable_stages()
    assert {"input (rg dark)", "input (spliced records)", "input (<column> flag)",
            "whole record"} <= stages                     # the search finds them
    missing = sorted(stage for stage in stages if f"``{stage}``" not in text)
    assert not missing, missing


def test_a_parent_renamed_while_a_run_computes_takes_the_lock_again(pristine_bundle, tmp_path):
    """A run holds ``.out.lock`` in the folder it writes into from its start (a second
    run waits). The folder was renamed while the run computed (faults40): the lock file
    went along, the run made the folder again at the path given and wrote there without
    its lock, so a second run into the remade path did not wait. The lock the run holds
    is now taken again where it no longer guards the path: here a second writer holds the
    remade path's lock, and the first one waits for it (refused at once with timeout 0)
    instead of writing beside it; once it is free the write completes."""
    from fluxpart.errors import OutputError
    from fluxpart.resultdir import folder_lock, lock_file, read_folder, write_folder

    manifest, tables = read_folder(pristine_bundle / "out")
    parent = tmp_path / "results"
    parent.mkdir()
    out = parent / "site"

    def write(held, timeout):
        return write_folder(out, tables, site=manifest["site"], config=manifest["config"],
                            seed=manifest["seed"], provenance={}, lock_timeout=timeout,
                            lock_held=held)

    with folder_lock(out, remove=True) as held:
        assert held.guards(out)
        parent.rename(tmp_path / "moved")                 # renamed while the run computes
        assert not held.guards(out)
        parent.mkdir()
        with folder_lock(out, remove=True):                # a second run into the path
            with pytest.raises(OutputError, match="being written by another fluxpart"):
                write(held, 0)
            assert not out.exists()
        assert write(held, 0) == out                       # free: written at the path
        assert (out / "manifest.json").is_file() and not lock_file(out).exists()
    assert not (tmp_path / "moved" / "site").exists()
