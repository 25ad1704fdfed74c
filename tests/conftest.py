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


@pytest.fixture(scope="module")
def bundle(tmp_path_factory):
    """A pristine bundle for the requesting module: site config `site.toml`, input
    `tower.csv` (:func:`bundles.make_bundle`) and its result folder `out` beside them."""
    from bundles import make_bundle

    from fluxpart.pipeline import process_site_config

    root = tmp_path_factory.mktemp("bundle")
    process_site_config(make_bundle(root)).write(root / "out")
    return root


@pytest.fixture
def copy(bundle, tmp_path):
    """A private copy of the requesting module's `bundle` (site config, input and result
    folder `out`), to edit or move."""
    target = tmp_path / "bundle"
    shutil.copytree(bundle, target)
    return target
