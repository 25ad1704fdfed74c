"""The seams of the contributor guide's architecture map, checked on the source (ast, the
standard library's parser) and on the modules an import loads."""
import ast
import re
import subprocess
import sys
from pathlib import Path

import fluxpart

ROOT = Path(fluxpart.__file__).parent
#: modules that compute a method or stage; a writer of results needs none of them
METHOD_MODULES = {"agreement", "audit", "budget", "budget_warnings", "clock", "column_faults",
                  "driver_mixture", "gap_sides", "gapfill", "method_failure", "night_donors",
                  "partition",
                  "nee_smoothing", "preflight", "responses", "rg_dim", "rg_zeros", "tair_days",
                  "saturated_gaps", "scenarios", "screening", "shared_records", "solar",
                  "storage_check", "uncertainty", "unit_checks", "ustar", "ustar_prefilter",
                  "ustar_seasonal", "vpd_zero", "demo", "record_shifts"}
#: the parts of ``fluxpart verify`` apart from its entry, verify.py (round verifysplit)
VERIFY_PARTS = ("verify_folder", "verify_inputs", "verify_restore", "verify_rerun",
                "verify_fields", "verify_compare", "verify_report")
ORCHESTRATORS = {"pipeline", "batch", "cli", "verify", "diff", "report", *VERIFY_PARTS}
#: the stage modules `pipeline.process` calls in order, each handing the next a small record
STAGE_MODULES = ("canonical_frame", "screening_stage", "ustar_stage", "respiration_driver",
                 "ustar_runs", "central_run", "result_tables", "uncertainty_assembly",
                 "method_settings")


def _relative_imports(name: str) -> set:
    """Every module a fluxpart source file imports relatively, at any depth of its code."""
    tree = ast.parse((ROOT / name).read_text(encoding="utf-8"))
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.level >= 1:
            if node.module:
                found.add(node.module.split(".")[0])
            else:                                   # from . import a, b
                found.update(alias.name for alias in node.names)
    return found


def _loaded_by(statement: str) -> set:
    code = (f"import sys; {statement}; "
            "print(sorted(m for m in sys.modules if m.startswith('fluxpart.')))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120, check=True)
    return {m.removeprefix("fluxpart.").split(".")[0] for m in eval(done.stdout)}


def test_manifest_and_pipeline_do_not_import_each_other():
    assert "pipeline" not in _relative_imports("manifest.py")
    assert "manifest" not in _relative_imports("pipeline.py")
    assert "pipeline" not in _loaded_by("import fluxpart.manifest")


def test_writers_know_no_orchestrator_and_no_method():
    """store, resultdir, manifest, export, export_csv and result write and read result
    folders; they import no orchestrator (pipeline, batch, the commands) and no method
    module."""
    for name in ("store.py", "resultdir.py", "manifest.py", "export.py", "export_csv.py",
                 "result.py"):
        imported = _relative_imports(name)
        assert not imported & (METHOD_MODULES | ORCHESTRATORS), (name, imported)
    loaded = _loaded_by("import fluxpart.store, fluxpart.resultdir, fluxpart.manifest, "
                        "fluxpart.export, fluxpart.export_csv, fluxpart.result")
    assert not loaded & (METHOD_MODULES | ORCHESTRATORS), loaded


def test_the_data_flow_map_names_every_stage_module_the_pipeline_calls():
    """Docs against the code (review22): the data-flow block of DEVELOPERS.md lacked the
    clock check and preflight, the seasonal u* runs, the respiration-temperature choice,
    the morning-release loop, the unit checks of a caller's frame and the schema's
    labelling, all of which process() calls."""
    text = (ROOT.parent / "DEVELOPERS.md").read_text(encoding="utf-8")
    block = text.split("## Architecture map", 1)[1].split("```", 2)[1]
    # the orchestrator is pipeline.py and the stage modules it calls (round thin1)
    files = ["pipeline.py", *(f"{name}.py" for name in STAGE_MODULES)]
    source = "\n".join((ROOT / name).read_text(encoding="utf-8") for name in files)
    imported = set().union(*map(_relative_imports, files)) | {
        "daytime", "nighttime", "respiration_form", "temperature_choice"}
    stages = METHOD_MODULES | {"schema", "budget_calendar", "daytime", "nighttime",
                               "respiration_form", "temperature_choice"}
    called = {name for name in imported & stages if re.search(rf"\b{name}\.\w+\(", source)}
    assert {"clock", "preflight", "budget", "gapfill"} <= called
    missing = {name for name in called if not re.search(rf"\b{name}\.\w+", block)}
    assert not missing, missing


def test_the_orchestrator_is_thin_and_its_stage_modules_are_mapped():
    """The brief's rule "one thin orchestrator; a new concern gets its own module"
    (DEVELOPERS.md, Architecture map), checked on the source (round thin1): pipeline.py
    defines its public functions only, `process` stays a list of stage calls (at most 90
    lines of code beside its docstring), every stage module is in the module table, and
    no stage module imports the orchestrator (no import cycle)."""
    tree = ast.parse((ROOT / "pipeline.py").read_text(encoding="utf-8"))
    defined = {node.name for node in tree.body
               if isinstance(node, (ast.FunctionDef, ast.ClassDef))}
    assert defined == {"check_record", "screening_summary", "stage_count", "process",
                       "process_site_config"}, defined
    process = next(node for node in tree.body if getattr(node, "name", "") == "process")
    body = process.body[1:]                                   # without the docstring
    assert body[-1].end_lineno - body[0].lineno + 1 <= 90
    table = (ROOT.parent / "DEVELOPERS.md").read_text(encoding="utf-8").split(
        "## Architecture map", 1)[1].split("## Rules of the house", 1)[0]
    unmapped = [name for name in STAGE_MODULES if f"| `{name}.py` |" not in table]
    assert not unmapped, unmapped
    for name in STAGE_MODULES:
        assert not _relative_imports(f"{name}.py") & ORCHESTRATORS, name
    assert "pipeline" not in _loaded_by("import " + ", ".join(
        f"fluxpart.{name}" for name in STAGE_MODULES))


def test_the_stage_hand_overs_have_numpy_docstrings():
    """The house rule (numpydoc's docstring standard, common practice) on the functions
    each stage module offers the orchestrator (round thin1): Parameters and Returns."""
    import importlib
    import inspect

    lacking = []
    for path in ("canonical_frame.run_record", "screening_stage.screened_record",
                 "ustar_stage.threshold_stage", "ustar_stage.record_runs",
                 "respiration_driver.resolve", "ustar_runs.run_inputs",
                 "ustar_runs.runs_with_release", "central_run.follow_ups",
                 "result_tables.timeseries_table", "result_tables.budget_tables",
                 "result_tables.screening_counts", "result_tables.run_provenance",
                 "result_tables.result", "uncertainty_assembly.uncertainty_stage"):
        module_name, public = path.rsplit(".", 1)
        member = getattr(importlib.import_module(f"fluxpart.{module_name}"), public)
        text = inspect.getdoc(member) or ""
        for section in ("Parameters", "Returns"):
            if f"{section}\n{'-' * len(section)}" not in text:
                lacking.append(f"{path}: {section}")
    assert not lacking, lacking


def test_readme_output_files_name_every_table_a_result_folder_holds():
    """Docs against the code (review22): README's "Output files" did not name
    screening.parquet, one of the tables every result folder holds."""
    from fluxpart.resultdir import _RESULT_TABLES

    text = (ROOT.parent / "README.md").read_text(encoding="utf-8")
    section = text.split("\n## Output files\n", 1)[1].split("\n## ", 1)[0]
    assert "screening" in _RESULT_TABLES
    missing = [name for name in _RESULT_TABLES if f"`{name}.parquet`" not in section]
    assert not missing, missing
    assert "`parameters_*.parquet`" in section and "`manifest.json`" in section


def test_readme_methods_table_states_the_unresolved_rref_limit_of_both_methods():
    """Docs against the code (review33): 0.25.0's one change that can move numbers (Rref
    windows with a standard error above NEE's plausible range dropped by the nighttime
    method and no anchor or resolved fit in the daytime one, round trial14) was in the
    changelog only; the README's methods table, which says what each method does, did not
    name it. Its rows must give the limit the code applies."""
    from fluxpart.partition import daytime, nighttime

    text = (ROOT.parent / "README.md").read_text(encoding="utf-8")
    rows = {line.split("|")[1].strip(): line for line in text.splitlines()
            if line.startswith("| nighttime partitioning |")
            or line.startswith("| daytime partitioning |")}
    assert set(rows) == {"nighttime partitioning", "daytime partitioning"}
    assert nighttime.RREF_SE_LIMIT == daytime._MAX_CURVE_RESPIRATION
    limit = f"standard error above {nighttime.RREF_SE_LIMIT:g} µmol m-2 s-1"
    for name, row in rows.items():
        assert limit in row and "since 0.25.0" in row, name


def test_readme_installs_fluxpart_from_the_checkout_not_by_its_name():
    """The README tells a user with a checkout how to install (review33): it said
    ``pip install "fluxpart[all]"``, which pip reads as a requirement by name and looks up
    on the package index (PEP 508: a name with extras; a path such as ``".[all]"`` installs
    the local project), where the name belongs to another project (m). Every ``pip
    install`` the README shows must install a path; checked with ``packaging``, the
    PEP 508 parser pip uses."""
    from packaging.requirements import InvalidRequirement, Requirement

    text = (ROOT.parent / "README.md").read_text(encoding="utf-8")
    commands = re.findall(r"pip install ((?:-[\w-]+ )*)([^`\s]+)", text)
    assert len(commands) >= 2
    by_name = []
    for _, target in commands:
        target = target.strip("'\"")
        try:
            Requirement(target)
        except InvalidRequirement:
            continue                          # a path: ".", ".[all]", "./fluxpart"
        by_name.append(target)
    assert not by_name, by_name


def test_readme_names_the_checks_of_round_mistakes28_with_their_bounds():
    """Docs against the code (review33): 0.25.0's two new preflight warnings, NEE written as
    a running mean (`nee_smoothing`) and tair whole days away from the humidity columns
    (`tair_days`), were in the changelog only, while the README lists every other
    preflight check with its bound. The README must name both with the bounds the code
    applies. The catalogue of checks moved from the README to the page it links,
    docs/checks.md (round readme47)."""
    from fluxpart import nee_smoothing, tair_days

    assert "(docs/checks.md)" in (ROOT.parent / "README.md").read_text(encoding="utf-8")
    text = " ".join((ROOT.parent / "docs" / "checks.md").read_text(encoding="utf-8").split())
    assert (f"correlate at {nee_smoothing.SMOOTHED_CORRELATION:g} or above over "
            f"{nee_smoothing._MIN_PAIRS} night pairs") in text
    assert f"start: {nee_smoothing._PART_MIN_PAIRS} pairs" in text
    assert f"at a correlation of {tair_days.MIN_CORRELATION:g} or more" in text


def test_the_public_functions_of_the_0_23_modules_have_numpy_docstrings():
    """The house rule (DEVELOPERS.md, Rules of the house): each method's docstring in the
    numpydoc layout (numpydoc's docstring standard, common practice) with its
    Parameters, Returns (or Yields) and a References section. Checked on the modules
    0.23.0 added, whose helpers lacked some (review28), and on those 0.25.0 added
    (review32). A function without parameters needs no Parameters section (numpydoc's
    standard lists the parameters a function takes)."""
    import importlib
    import inspect

    lacking = []
    for name in ("night_uptake", "stamp_places", "unit_labels", "ustar_fixed",
                 "input_changes", "partition.pieces", "settings_notes", "gap_sides",
                 "measured_months", "shared_records", "worker_match", "rg_zeros",
                 "rg_dim"):
        module = importlib.import_module(f"fluxpart.{name}")
        names = getattr(module, "__all__", None) or [
            key for key, value in vars(module).items() if not key.startswith("_")
            and inspect.isfunction(value) and value.__module__ == module.__name__]
        for public in names:
            member = getattr(module, public)
            if not inspect.isfunction(member):
                continue
            text = inspect.getdoc(member) or ""
            takes = bool(inspect.signature(member).parameters)
            for section in ("Parameters", ("Returns", "Yields"), "References"):
                options = section if isinstance(section, tuple) else (section,)
                if section == "Parameters" and not takes:
                    continue
                if not any(f"{option}\n{'-' * len(option)}" in text for option in options):
                    lacking.append(f"{name}.{public}: {options[0]}")
    assert not lacking, lacking


def test_the_public_functions_added_to_older_modules_since_0_24_have_numpy_docstrings():
    """The same house rule (numpydoc's docstring standard, common practice) on the public
    functions 0.25.0 added to modules that existed before it (review32)."""
    import importlib
    import inspect

    lacking = []
    for path in ("_validate.unicode_form_hint", "batch.same_records_sites",
                 "batch.same_name_sites", "gapfill.fill_marginal_values",
                 "input_changes.located_changes", "store.full_disk_remedy",
                 "store.special_kind", "timestamps.offsets_in_stamps"):
        module_name, public = path.rsplit(".", 1)
        member = getattr(importlib.import_module(f"fluxpart.{module_name}"), public)
        text = inspect.getdoc(member) or ""
        for section in ("Parameters", "Returns", "References"):
            if f"{section}\n{'-' * len(section)}" not in text:
                lacking.append(f"{path}: {section}")
    assert not lacking, lacking


def test_the_benchmarks_time_stage_functions_that_exist():
    """The stage timings of ``bench_process.py --stages`` and ``bench_commands.py --stages``
    wrap each named function by ``setattr`` on its module (round review34: after round thin1
    they still named ``pipeline._clock_and_preflight``, ``_chosen_temperature``,
    ``_ustar_thresholds``, ``_fill_and_partition`` and ``_uncertainty``, which moved to the
    stage modules, so both ``--stages`` runs ended in an AttributeError). Every named
    function resolves (the names read with ast, the standard library's parser)."""
    import importlib

    benchmarks = ROOT.parent / "tests" / "benchmarks"
    named = []
    process_tree = ast.parse((benchmarks / "bench_process.py").read_text(encoding="utf-8"))
    for node in ast.walk(process_tree):
        if isinstance(node, ast.Assign) and getattr(node.targets[0], "id", "") == "_STAGES":
            named += [tuple(item[:2]) for item in ast.literal_eval(node.value)]
    commands_tree = ast.parse((benchmarks / "bench_commands.py").read_text(encoding="utf-8"))
    child = next(ast.literal_eval(node.value) for node in ast.walk(commands_tree)
                 if isinstance(node, ast.Assign)
                 and getattr(node.targets[0], "id", "") == "_STAGE_CHILD")
    for node in ast.walk(ast.parse(child)):
        if isinstance(node, ast.Assign) and getattr(node.targets[0], "id", "") == "STAGES":
            named += [tuple(item[:2]) for item in ast.literal_eval(node.value)]
    assert len(named) >= 15, named
    missing = []
    for module_name, name in named:
        owner = importlib.import_module(module_name)
        for part in name.split("."):
            owner = getattr(owner, part, None)
        if owner is None:
            missing.append(f"{module_name}.{name}")
    assert not missing, missing


def test_every_public_function_of_the_stage_modules_has_a_numpy_docstring():
    """The house rule (numpydoc's docstring standard, common practice) on every public
    function the stage modules define, not only the hand-overs (round review34: 17 of them,
    moved from pipeline.py with their one-line private docstrings, had no Parameters
    section, `canonical_frame.respiration_setting` no docstring at all): Parameters, and
    Returns or (for a check that returns nothing) Raises."""
    import importlib
    import inspect

    lacking = []
    for name in STAGE_MODULES:
        module = importlib.import_module(f"fluxpart.{name}")
        for public, member in vars(module).items():
            if (public.startswith("_") or not inspect.isfunction(member)
                    or member.__module__ != module.__name__):
                continue
            text = inspect.getdoc(member) or ""
            sections = {s for s in ("Parameters", "Returns", "Raises")
                        if f"{s}\n{'-' * len(s)}" in text}
            if "Parameters" not in sections or not sections & {"Returns", "Raises"}:
                lacking.append(f"{name}.{public}")
    assert not lacking, lacking


def test_the_stage_modules_read_no_fluxpart_module_through_a_fallback():
    """A stage module that reads a name of another fluxpart module through ``getattr``
    with a default (``getattr(gapfill, "QUALITY_NAMES", None) or {...}``) keeps a second
    copy of what the module defines, which is dead while the name exists and wrong once
    the module's codes change (round review34: two such fallbacks in result_tables' label
    maps, left by the code's move from pipeline.py). Checked with ast, the standard
    library's parser: ``getattr`` whose first argument is an imported fluxpart module."""
    found = []
    for name in ("pipeline", *STAGE_MODULES):
        tree = ast.parse((ROOT / f"{name}.py").read_text(encoding="utf-8"))
        modules = _relative_imports(f"{name}.py")
        for node in ast.walk(tree):
            if (isinstance(node, ast.Call) and getattr(node.func, "id", "") == "getattr"
                    and node.args and getattr(node.args[0], "id", "") in modules):
                found.append(f"{name}.py:{node.lineno}")
    assert not found, found


def test_the_parts_of_verify_are_mapped_import_no_entry_and_only_the_rerun_runs_the_pipeline():
    """The house rule "one concern per module" on ``fluxpart verify`` (round verifysplit:
    verify.py, 2,828 lines, split into its parts, verify.py the entry the command line
    calls). Each part is in the module table; no part imports the entry (it imports them:
    no cycle) or the command line; only the rerun imports the pipeline, so that reading,
    comparing and wording a verdict load no method (the modules an import loads, in a
    fresh interpreter); the public names other modules import from the entry stay
    importable from it."""
    import importlib

    table = (ROOT.parent / "DEVELOPERS.md").read_text(encoding="utf-8").split(
        "## Architecture map", 1)[1].split("## Rules of the house", 1)[0]
    unmapped = [name for name in ("verify", *VERIFY_PARTS) if f"| `{name}.py` |" not in table]
    assert not unmapped, unmapped
    for name in VERIFY_PARTS:
        imported = _relative_imports(f"{name}.py")
        assert not imported & {"verify", "verify_network", "cli", "batch", "diff", "report"}, (
            name, imported)
        assert ("pipeline" in imported) == (name == "verify_rerun"), (name, imported)
    parts = [name for name in VERIFY_PARTS if name != "verify_rerun"]
    loaded = _loaded_by("import " + ", ".join(f"fluxpart.{name}" for name in parts))
    assert not loaded & {"pipeline", "verify", "verify_rerun", "batch", "cli"}, loaded
    entry = importlib.import_module("fluxpart.verify")
    for name in ("ROUNDING_TOLERANCE", "STANDARD_ERROR_TOLERANCE", "NEAR_ZERO_SHARE",
                 "EMPTY_SHA256", "CONFIG_EDITED", "JSON_FORMAT", "VERIFY_CAUTION",
                 "Difference", "VerifyReport", "compare_tables", "within_rounding",
                 "field_differences", "cut_where_they_differ", "respelled_inputs",
                 "metadata_differences", "result_identity", "remove_dead_scratch",
                 "scratch_folder", "PACKED_FORMS", "verify", "command_verify"):
        assert name in entry.__all__ and hasattr(entry, name), name


def test_the_public_functions_of_the_parts_of_verify_have_numpy_docstrings():
    """The house rule (numpydoc's docstring standard, common practice) on every public
    function the parts of ``fluxpart verify`` define (round verifysplit): Parameters where
    it takes any, and Returns or Yields."""
    import importlib
    import inspect

    lacking = []
    for name in VERIFY_PARTS:
        module = importlib.import_module(f"fluxpart.{name}")
        for public, member in vars(module).items():
            if (public.startswith("_") or not inspect.isfunction(member)
                    or member.__module__ != module.__name__):
                continue
            text = inspect.getdoc(member) or ""
            if inspect.signature(member).parameters and "Parameters\n----------" not in text:
                lacking.append(f"{name}.{public}: Parameters")
            if not any(f"{s}\n{'-' * len(s)}" in text for s in ("Returns", "Yields")):
                lacking.append(f"{name}.{public}: Returns")
    assert not lacking, lacking


def test_the_stamp_modules_import_only_the_layers_below_them():
    """timestamps.py split by concern (round stampsplit): what a time_format lays out
    (stamp_formats), the hints of a refusal (stamp_hints), time zones (time_zones),
    parsing (timestamps) and the order and spacing of the stamps read (stamp_sequence)
    import only modules listed before them (ast, the standard library's parser), so they
    form no import cycle; budget years (budget_calendar) import none of them, and
    importing them loads none (budget, canonical_frame, preflight and pipeline use budget
    years without the reader's modules)."""
    layers = ["stamp_formats", "stamp_hints", "time_zones", "timestamps", "stamp_sequence"]
    upward = {name: sorted(_relative_imports(f"{name}.py") & set(layers[index:]))
              for index, name in enumerate(layers)}
    assert not any(upward.values()), upward
    assert not _relative_imports("budget_calendar.py") & set(layers)
    assert not _loaded_by("import fluxpart.budget_calendar") & set(layers)
