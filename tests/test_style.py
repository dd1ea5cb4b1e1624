"""The code style the project follows, enforced: ruff with numpydoc docstring rules (pyproject.toml)."""

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def test_ruff_is_clean():
    """`ruff check molid tests` reports nothing (pydocstyle numpy convention, pyflakes, bugbear)."""
    pytest.importorskip("ruff")
    result = subprocess.run([sys.executable, "-m", "ruff", "check", "molid", "tests"], cwd=ROOT,
                            capture_output=True, text=True)
    assert result.returncode == 0, result.stdout + result.stderr
