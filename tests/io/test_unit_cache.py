"""Units resolved once by pint and kept in the user cache: the same scale and offset, bit for bit."""

import json

import pytest

from molid.io import units


@pytest.fixture
def fresh(monkeypatch, tmp_path):
    """Give an empty user cache; empty the in-process caches of resolved units before and after."""
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path))
    units._cached_units.cache_clear()
    units.resolve_unit.cache_clear()
    yield tmp_path
    units._cached_units.cache_clear()
    units.resolve_unit.cache_clear()


CASES = [("temperature", "°C"), ("temperature", "degF"), ("pressure", "mmHg"), ("pressure", "Torr"),
         ("pressure", "psia"), ("volume", "cm3"), ("volume", None), ("fraction", "% RH"),
         ("fraction", "ppm"), ("length", "in"), ("mass", "mg")]


def test_cached_units_equal_pints(fresh):
    """A unit read from the cache in a later process has pint's scale and offset, to the bit.

    Reference: pint's own conversion of each unit (pint's definitions file: 1 mmHg =
    133.322387415 Pa, 1 Torr = 101325/760 Pa, 0 °C = 273.15 K; BIPM SI Brochure 2019).
    """
    direct = {case: units._resolve_with_pint(case[0], case[1] or units.DEFAULT_UNITS[case[0]])
              for case in CASES}
    first = {case: units.resolve_unit(*case) for case in CASES}
    (document,) = fresh.glob("units-*.json")
    units._cached_units.cache_clear()
    units.resolve_unit.cache_clear()
    second = {case: units.resolve_unit(*case) for case in CASES}
    for case in CASES:
        assert first[case] == direct[case] == second[case]
        assert float.hex(second[case].scale) == float.hex(direct[case].scale)
    assert second[("pressure", "mmHg")].scale == 133.322387415
    assert second[("temperature", "°C")].offset == 273.15
    assert json.loads(document.read_text(encoding="utf-8"))["pressure:mmHg"] == [133.322387415, 0.0]


def test_bad_units_are_not_cached_and_still_refused(fresh):
    """Checks behaviour: an unknown unit raises every time and leaves no entry; a broken entry is redone."""
    for _ in range(2):
        with pytest.raises(units.UnitProblem, match="unknown unit 'blorp'"):
            units.resolve_unit("pressure", "blorp")
        with pytest.raises(units.UnitProblem, match="'furlong/fortnight' is not a pressure unit"):
            units.resolve_unit("pressure", "furlong/fortnight")
        units.resolve_unit.cache_clear()
    units.resolve_unit("pressure", "kPa")
    (document,) = fresh.glob("units-*.json")
    entries = json.loads(document.read_text(encoding="utf-8"))
    assert list(entries) == ["pressure:kPa"]
    document.write_text(json.dumps({"pressure:kPa": [1.0, "zero"]}), encoding="utf-8")
    units._cached_units.cache_clear()
    units.resolve_unit.cache_clear()
    assert units.resolve_unit("pressure", "kPa").scale == 1000.0
