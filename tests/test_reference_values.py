"""Every reference value in tests/reference_values.toml carries its provenance."""

import sys
from pathlib import Path

import pytest

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

REFERENCE_FILE = Path(__file__).with_name("reference_values.toml")


def _entries(table, path=()):
    """Yield (dotted name, table) for every table holding values."""
    values = {key: item for key, item in table.items() if not isinstance(item, dict)}
    if values:
        yield ".".join(path), values
    for key, item in table.items():
        if isinstance(item, dict):
            yield from _entries(item, (*path, key))


with REFERENCE_FILE.open("rb") as _stream:
    ENTRIES = dict(_entries(tomllib.load(_stream)))


@pytest.mark.parametrize("name", sorted(ENTRIES))
def test_every_entry_names_a_source(name):
    """Checks behaviour: each entry has a non-empty ``source`` naming where its value comes from."""
    source = ENTRIES[name].get("source", "")
    assert isinstance(source, str) and len(source.strip()) >= 10, name
