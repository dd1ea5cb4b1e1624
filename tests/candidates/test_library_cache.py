"""The candidate library's formulas cached in the user cache: the same library, bit for bit."""

import json

import numpy as np
import pandas as pd
import periodictable
import pytest

from molid.candidates import library as library_module
from molid.candidates.library import DEFAULT_LIBRARY_PATH
from molid.physics.formulas import molar_mass


@pytest.fixture
def cache_folder(monkeypatch, tmp_path):
    """Give the test an empty user cache of its own."""
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path))
    return tmp_path


def _documents(folder):
    return sorted(path.name for path in folder.glob("formulas-*.json"))


def test_cached_library_equals_the_parsed_one(cache_folder):
    """Checks behaviour: a library read through the cache equals one parsed by periodictable, to the bit.

    The first read parses every formula and writes the cache; the second takes the Hill
    formulas and molar masses from it. Both must equal the library parsed without a cache.
    """
    first = library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    assert len(_documents(cache_folder)) == 1
    document = json.loads((cache_folder / _documents(cache_folder)[0]).read_text(encoding="utf-8"))
    assert document["CO2"] == ["CO2", first.loc[first["formula"] == "CO2", "molar_mass"].item()]
    second = library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    pd.testing.assert_frame_equal(first, second)
    assert np.array_equal(first["molar_mass"].to_numpy().view(np.int64),
                          second["molar_mass"].to_numpy().view(np.int64))


def test_cached_molar_masses_are_periodictables(cache_folder):
    """Cached molar masses are those computed afresh from periodictable's atomic weights, to the bit.

    The reference is periodictable 2.x's formula mass (IUPAC abridged atomic weights), in kg/mol.
    """
    library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    cached = library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    for formula in ("CO2", "F6S", "C4H10", "D2", "Ar"):
        row = cached.loc[cached["formula"] == formula].iloc[0]
        assert row["molar_mass"] == molar_mass(formula)
        assert row["molar_mass"] == pytest.approx(periodictable.formula(formula).mass / 1000.0, rel=1e-15)


def test_a_changed_file_or_a_broken_cache_is_parsed_afresh(cache_folder, tmp_path):
    """Checks behaviour: another file's bytes miss the cache; a corrupt entry is not trusted."""
    user = tmp_path / "mine.csv"
    user.write_text("name,formula\nxenon difluoride,XeF2\n", encoding="utf-8")
    library_module._read_library_file(user, "mine.csv")
    assert len(_documents(cache_folder)) == 1
    user.write_text("name,formula\nxenon difluoride,XeF2\nkrypton difluoride,KrF2\n", encoding="utf-8")
    read = library_module._read_library_file(user, "mine.csv")
    assert len(_documents(cache_folder)) == 2
    assert read["hill"].tolist() == ["F2Xe", "F2Kr"]
    for name in _documents(cache_folder):
        (cache_folder / name).write_text(json.dumps({"XeF2": ["F2Xe", "heavy"], "KrF2": [1, 2.0]}))
    again = library_module._read_library_file(user, "mine.csv")
    assert again["molar_mass"].tolist() == [molar_mass(text) for text in ("XeF2", "KrF2")]


def test_no_cache_folder_still_loads(monkeypatch, tmp_path):
    """Checks behaviour: with the cache off, or its folder not writable, the library loads all the same."""
    monkeypatch.setenv("MOLID_CACHE_DIR", "")
    off = library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    blocker = tmp_path / "file"
    blocker.write_text("")
    monkeypatch.setenv("MOLID_CACHE_DIR", str(blocker / "cache"))
    blocked = library_module._read_library_file(DEFAULT_LIBRARY_PATH, "default")
    pd.testing.assert_frame_equal(off, blocked)
