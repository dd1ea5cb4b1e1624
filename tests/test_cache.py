"""The user cache (molid/cache.py): where it is, round trips, and silence when it cannot be used."""

import os

import pytest

from molid import cache


def test_folder_from_environment(monkeypatch, tmp_path):
    """Checks behaviour: MOLID_CACHE_DIR chooses the folder, empty turns the cache off, else XDG on Linux."""
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path))
    assert cache.cache_folder() == tmp_path
    monkeypatch.setenv("MOLID_CACHE_DIR", "")
    assert cache.cache_folder() is None
    assert cache.write_document("a.json", {"x": 1.0}) is False
    assert cache.read_document("a.json") is None
    monkeypatch.delenv("MOLID_CACHE_DIR")
    if cache.sys.platform.startswith("linux"):
        monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
        assert cache.cache_folder() == tmp_path / "xdg" / "molid"


def test_round_trip_keeps_every_bit(monkeypatch, tmp_path):
    """Checks behaviour: floats written and read back are the same doubles (JSON keeps 17 digits)."""
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path / "new" / "folder"))
    values = {"a": [0.1 + 0.2, 1.0000000000000002e-06, -0.0, 5e-324, 273.15]}
    assert cache.write_document("doc.json", values)
    back = cache.read_document("doc.json")
    assert [float.hex(x) for x in back["a"]] == [float.hex(x) for x in values["a"]]
    assert [name for name in os.listdir(tmp_path / "new" / "folder")] == ["doc.json"]


def test_unwritable_or_broken_cache_is_passed_over(monkeypatch, tmp_path):
    """Checks behaviour: a cache folder that is a file, or a document that is not JSON, gives None/False."""
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    monkeypatch.setenv("MOLID_CACHE_DIR", str(blocker))
    assert cache.write_document("doc.json", {"a": 1.0}) is False
    assert cache.read_document("doc.json") is None
    monkeypatch.setenv("MOLID_CACHE_DIR", str(tmp_path))
    (tmp_path / "doc.json").write_text("{half a docu")
    assert cache.read_document("doc.json") is None
    assert cache.write_document("nan.json", {"a": float("nan")}) is False
    assert not [name for name in os.listdir(tmp_path) if name.endswith(".tmp")]


def test_content_key_separates_parts():
    """Checks behaviour: the key depends on every part and on where one part ends."""
    assert cache.content_key(b"x", "1") != cache.content_key(b"x", "2")
    assert cache.content_key("ab", "c") != cache.content_key("a", "bc")
    assert len(cache.content_key(b"")) == 24
    with pytest.raises(TypeError):
        cache.content_key(1.5)
