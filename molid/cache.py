"""The user cache: what molid derives from its data files once and reads back in later processes.

Parsing the candidate library's formulas with periodictable and building pint's
unit registry cost more than the rest of a one-run analysis. Their results are
kept as small JSON documents in a per-user cache folder, each under a name that
carries a hash of everything the result depends on (the data file's bytes, the
library's version, molid's own code that derives it), so a changed input never
meets a stale result: it misses and is derived afresh.

The folder is ``$MOLID_CACHE_DIR`` when that is set (empty: no cache), else the
platform's user cache folder (``$XDG_CACHE_HOME/molid`` or ``~/.cache/molid`` on
Linux, ``~/Library/Caches/molid`` on macOS, ``%LOCALAPPDATA%/molid/Cache`` on
Windows); never inside the installed package. A folder that cannot be created or
written, or a document that cannot be read, is passed over in silence: the result
is then derived as if there were no cache.
"""

from __future__ import annotations

import hashlib
import json
import os
import sys
import tempfile
from pathlib import Path

__all__ = ["cache_folder", "content_key", "read_document", "write_document"]


def cache_folder() -> Path | None:
    """Return the folder for molid's cached documents (not created here), or None when disabled.

    Returns
    -------
    pathlib.Path or None
        ``$MOLID_CACHE_DIR`` when set (None when it is set but empty), else the
        platform's per-user cache folder with ``molid`` appended.
    """
    chosen = os.environ.get("MOLID_CACHE_DIR")
    if chosen is not None:
        return Path(chosen) if chosen.strip() else None
    if sys.platform.startswith("win"):
        base = os.environ.get("LOCALAPPDATA")
        return Path(base) / "molid" / "Cache" if base else None
    if sys.platform == "darwin":
        return Path.home() / "Library" / "Caches" / "molid"
    base = os.environ.get("XDG_CACHE_HOME", "").strip()
    return (Path(base) if base else Path.home() / ".cache") / "molid"


def content_key(*parts) -> str:
    """Hash the parts a cached result depends on into a short key for its file name.

    Parameters
    ----------
    *parts : bytes or str
        E.g. a data file's bytes and a library's version.

    Returns
    -------
    str
        24 hexadecimal digits of the SHA-256 of the parts, each prefixed by its length.

    Examples
    --------
    >>> content_key(b"name,formula", "2.1.0") == content_key(b"name,formula", "2.1.0")
    True
    >>> content_key("ab", "c") == content_key("a", "bc")
    False
    """
    digest = hashlib.sha256()
    for part in parts:
        data = part.encode("utf-8") if isinstance(part, str) else bytes(part)
        digest.update(len(data).to_bytes(8, "little"))
        digest.update(data)
    return digest.hexdigest()[:24]


def read_document(name: str):
    """Read a cached JSON document, or None when it is absent, unreadable or caching is off.

    Parameters
    ----------
    name : str
        The document's file name inside the cache folder.

    Returns
    -------
    object or None
        The parsed JSON.
    """
    folder = cache_folder()
    if folder is None:
        return None
    try:
        with open(folder / name, encoding="utf-8") as stream:
            return json.load(stream)
    except (OSError, ValueError):
        return None


def write_document(name: str, document) -> bool:
    """Write a JSON document to the cache atomically; do nothing when that is not possible.

    Parameters
    ----------
    name : str
        The document's file name inside the cache folder.
    document : object
        JSON-serialisable; floats are written so that they read back to the same bits.

    Returns
    -------
    bool
        True when the document was written.

    Notes
    -----
    The document is written to a temporary file in the same folder and renamed
    over the old one, so a process reading it at the same time sees the old or
    the new document, never a part of one.
    """
    folder = cache_folder()
    if folder is None:
        return False
    temporary = None
    try:
        folder.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(prefix=f".{name}.", suffix=".tmp", dir=folder)
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            json.dump(document, stream, allow_nan=False, ensure_ascii=False)
        os.replace(temporary, folder / name)
        return True
    except (OSError, TypeError, ValueError):
        if temporary is not None:
            try:
                os.unlink(temporary)
            except OSError:
                pass
        return False
