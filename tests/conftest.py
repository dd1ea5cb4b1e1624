"""Shared test fixtures: the reference values with their provenance (tests/reference_values.toml)."""

import sys
from pathlib import Path

import pytest

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

REFERENCE_FILE = Path(__file__).with_name("reference_values.toml")


@pytest.fixture(scope="session")
def reference():
    """Load the reference values with their provenance (tests/reference_values.toml)."""
    with REFERENCE_FILE.open("rb") as stream:
        return tomllib.load(stream)
