"""Shared fixtures: reference values with their sources, seeded random generators."""

import shutil
import tomllib
from pathlib import Path

import numpy as np
import pytest

REFERENCE_DIR = Path(__file__).resolve().parent.parent / "reference"


def load_reference(name: str) -> dict:
    """Load ``reference/<name>.toml``: published check values, each with its source."""
    with open(REFERENCE_DIR / f"{name}.toml", "rb") as handle:
        return tomllib.load(handle)


@pytest.fixture
def rng():
    """A seeded NumPy generator, the same in every test."""
    return np.random.default_rng(20261202)


@pytest.fixture(scope="session")
def written_demo(tmp_path_factory):
    """One demo site-year processed with few draws and written to a result folder.

    Shared by the tests of the written files (schema, store, export): (result, folder).
    Few bootstrap and Monte Carlo draws keep it quick; every table is still produced.
    """
    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=0)
    config = fluxpart.Config(ustar_bootstrap_draws=20, random_error_draws=50)
    result = fluxpart.process(frame, demo.site(), config)
    folder = result.write(tmp_path_factory.mktemp("written") / "result")
    return result, folder


@pytest.fixture(scope="session")
def demo_default_run():
    """Demo seed 0 processed with the default settings: (frame, truth, result).

    Computed once for the modules that read this run (pipeline contract, frame codes,
    result edits). Read-only: a test that changes a table of `result` puts it back in a
    ``finally`` (or works on ``pickle.loads(pickle.dumps(result))``); `frame` is the
    input, which `process` must leave alone.
    """
    import warnings

    import fluxpart
    from fluxpart import demo

    frame, truth = demo.site_year(seed=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        result = fluxpart.process(frame, demo.site())
    return frame, truth, result


@pytest.fixture(scope="session")
def demo_draws20_run():
    """Demo seed 0 processed with a 20-draw u* bootstrap (else the defaults): the result.

    Shared by the report tests and round review39's; read-only (a test that needs other
    tables or provenance makes its own with ``dataclasses.replace``)."""
    import warnings

    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        return fluxpart.process(frame, demo.site(), fluxpart.Config(ustar_bootstrap_draws=20))


@pytest.fixture(scope="session")
def demo_tsoil_run():
    """Demo seed 4 processed with respiration set to soil temperature and no u* bootstrap:
    (frame, config, result). Read by the pipeline's driver test and the temperature
    choice's set-temperature warning; read-only."""
    import warnings

    import fluxpart
    from fluxpart import demo

    frame, _ = demo.site_year(seed=4)
    config = fluxpart.Config(respiration_driver="tsoil", ustar_bootstrap_draws=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        return frame, config, fluxpart.process(frame, demo.site(), config)


@pytest.fixture(scope="session")
def pristine_bundle(tmp_path_factory):
    """The bundle of :func:`bundles.make_bundle`, processed and written once per session;
    each module gets its own copy (`bundle`)."""
    from bundles import make_bundle

    from fluxpart.pipeline import process_site_config

    root = tmp_path_factory.mktemp("bundle_source")
    process_site_config(make_bundle(root)).write(root / "out")
    return root


@pytest.fixture(scope="module")
def bundle(pristine_bundle, tmp_path_factory):
    """A pristine bundle for the requesting module: site config `site.toml`, input
    `tower.csv` (:func:`bundles.make_bundle`) and its result folder `out` beside them.

    A copy of the session's `pristine_bundle` (the same run, so byte-identical tables:
    the pipeline is deterministic), in a folder of the module's own."""
    root = tmp_path_factory.mktemp("bundle")
    shutil.copytree(pristine_bundle, root, dirs_exist_ok=True)
    return _run_here(root)


def _run_here(root):
    """`root` after its run log is made to say the run wrote ``root/out`` (a copy's log
    names the session's pristine folder, whose input verify would find there: a test
    that removes or moves the copy's input then meant nothing; round faults43)."""
    import json

    log_path = root / "out" / "run-log.json"
    log = json.loads(log_path.read_text(encoding="utf-8"))
    log["result_folder"], log["working_directory"] = str(root / "out"), str(root)
    log_path.write_text(json.dumps(log, indent=2), encoding="utf-8")
    return root


@pytest.fixture
def copy(bundle, tmp_path):
    """A private copy of the requesting module's `bundle` (site config, input and result
    folder `out`), to edit or move."""
    target = tmp_path / "bundle"
    shutil.copytree(bundle, target)
    return _run_here(target)
