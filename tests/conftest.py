"""Shared fixtures: reference values with their sources, seeded random generators."""

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
