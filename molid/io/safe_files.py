"""Writing output files safely: atomically, never over an input, never silently over an output.

Also neutralises cells a spreadsheet would run as formulas.

References
----------
OWASP, "CSV Injection" (formula injection in exported spreadsheets): cells
beginning with ``=``, ``+``, ``-``, ``@``, tab or carriage return are prefixed
with a single quote so that a spreadsheet shows them as text.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

__all__ = ["OutputRefused", "check_output_path", "atomic_output", "write_atomic", "neutralise_cell"]

_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


class OutputRefused(ValueError):
    """An output path that would overwrite an input or an existing file."""


def check_output_path(output, inputs=(), force: bool = False) -> Path:
    """Refuse an output path that is one of the inputs, or exists without ``force``.

    Parameters
    ----------
    output : str or pathlib.Path
        Where to write.
    inputs : iterable of str or pathlib.Path
        Files read by the same command ("-" for stdin is ignored).
    force : bool
        Allow replacing an existing output file.

    Returns
    -------
    pathlib.Path
        The output path.

    Raises
    ------
    OutputRefused
        With a message saying why and what to do.
    """
    path = Path(output)
    for item in inputs:
        if item is None or str(item) == "-":
            continue
        try:
            same = path.exists() and Path(item).exists() and path.samefile(item)
        except OSError:
            same = False
        if same or path.resolve() == Path(item).resolve():
            raise OutputRefused(f"{path}: is an input of this command; write the output elsewhere")
    if path.is_dir():
        raise OutputRefused(f"{path}: is a folder; give a file name")
    if path.exists() and not force:
        raise OutputRefused(f"{path}: already exists; use --force to replace it")
    if not path.parent.exists():
        raise OutputRefused(f"{path}: the folder {path.parent} does not exist")
    return path


@contextlib.contextmanager
def atomic_output(path, mode: str = "wb"):
    """Open a temporary file beside ``path`` that replaces it only if the block succeeds.

    A reader never sees a half-written file, and a failure (or an interruption)
    leaves any previous file in place and no temporary file behind.

    Parameters
    ----------
    path : str or pathlib.Path
        The file to write.
    mode : {"wb", "w"}
        Binary, or text (UTF-8, newlines as written).

    Yields
    ------
    file object
        The open temporary file.
    """
    path = Path(path)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        # mkstemp makes the file private; give it the permissions a new file would get.
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
        text = {"encoding": "utf-8", "newline": ""} if "b" not in mode else {}
        with os.fdopen(handle, mode, **text) as stream:
            yield stream
            stream.flush()
            os.fsync(stream.fileno())
        os.replace(temporary, path)
    except BaseException:
        try:
            os.unlink(temporary)
        except FileNotFoundError:
            pass
        raise


def write_atomic(path, data: bytes | str) -> None:
    """Write a file through a temporary file in the same folder and a rename."""
    if isinstance(data, str):
        data = data.encode("utf-8")
    with atomic_output(path, "wb") as stream:
        stream.write(data)


def neutralise_cell(value):
    r"""Make a text cell safe for a spreadsheet; numbers (even negative) stay numbers.

    Examples
    --------
    >>> neutralise_cell('=HYPERLINK("x")')
    '\'=HYPERLINK("x")'
    >>> neutralise_cell("-0.25"), neutralise_cell(-0.25)
    ('-0.25', -0.25)
    """
    if not isinstance(value, str) or not value.startswith(_FORMULA_STARTS):
        return value
    try:
        float(value.replace(",", "."))
        return value
    except ValueError:
        return "'" + value
