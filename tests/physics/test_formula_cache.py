"""Formulas without importing periodictable: subscripts, and molar masses kept in the user cache."""

import json
import subprocess
import sys

import periodictable
import pytest
from periodictable.formulas import from_subscript as periodictable_from_subscript

from molid.physics import formulas


@pytest.fixture
def cache_folder(monkeypatch, tmp_path):
    """Give the test an empty user cache of its own and forget values read in this process."""
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path))
    formulas.cached_molar_mass.cache_clear()
    yield tmp_path
    formulas.cached_molar_mass.cache_clear()


def test_subscripts_as_periodictable_reads_them():
    """The subscript mapping is periodictable's own (``formulas.from_subscript``), character for character."""
    text = "".join(chr(code) for code in range(0x2070, 0x20A0)) + " C₃H₈ CO₂ (CH₃)₂O x"
    assert formulas.from_subscript(text) == periodictable_from_subscript(text)


def test_cached_molar_mass_is_periodictables_to_the_bit(cache_folder):
    """A molar mass read back from the cache is periodictable's formula mass in kg/mol, to the bit.

    The reference is periodictable's own ``formula(...).mass`` (IUPAC abridged atomic weights).
    """
    first = formulas.cached_molar_mass("H2O")
    documents = list(cache_folder.glob("molar-masses-*.json"))
    assert len(documents) == 1
    assert json.loads(documents[0].read_text(encoding="utf-8")) == {"H2O": first}
    formulas.cached_molar_mass.cache_clear()
    second = formulas.cached_molar_mass("H2O")
    assert second.hex() == first.hex() == (periodictable.formula("H2O").mass / 1000.0).hex()


def test_a_broken_entry_or_another_periodictable_misses(cache_folder, monkeypatch):
    """Checks behaviour: a cached value that is not a float is recomputed; another periodictable misses."""
    formulas.cached_molar_mass("CO2")
    (document,) = cache_folder.glob("molar-masses-*.json")
    document.write_text(json.dumps({"CO2": "heavy"}), encoding="utf-8")
    formulas.cached_molar_mass.cache_clear()
    assert formulas.cached_molar_mass("CO2") == formulas.molar_mass("CO2")
    name = formulas._molar_mass_cache_name()
    monkeypatch.setattr(formulas, "periodictable_fingerprint", lambda: "another version")
    assert formulas._molar_mass_cache_name() != name


def test_fingerprint_follows_the_installed_files():
    """Checks behaviour: the fingerprint is a hash of periodictable's files, found without importing it."""
    code = ("import sys\nfrom molid.physics.formulas import periodictable_fingerprint\n"
            "print(periodictable_fingerprint(), 'periodictable' in sys.modules)\n")
    output = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                            check=True).stdout.split()
    assert output == [formulas.periodictable_fingerprint(), "False"]
    assert len(output[0]) == 24
