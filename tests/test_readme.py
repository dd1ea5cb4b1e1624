"""The README's examples run as written."""

import os
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_notebook_example_runs(monkeypatch):
    """Checks behaviour: the README's Python example runs from the repository root as a user types it."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = re.search(r"From Python \(a notebook\):\n\n```python\n(.*?)```", text, re.S).group(1)
    monkeypatch.chdir(ROOT)
    namespace: dict = {}
    exec(compile(block, "README.md", "exec"), namespace)  # noqa: S102 - our own documentation
    assert len(namespace["result"].molar_mass) > 0 and len(namespace["grading"].grades) > 0
    assert os.getcwd() == str(ROOT)
