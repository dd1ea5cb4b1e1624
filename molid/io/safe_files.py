"""Writing output files safely: atomically, never over an input, never silently over an output.

Outputs are regular files only: a device, socket or named pipe is refused, even with
``--force`` (``-`` is standard output). Also neutralises cells a spreadsheet would
run as formulas.

References
----------
OWASP, "CSV Injection" (formula injection in exported spreadsheets): cells
beginning with ``=``, ``+``, ``-``, ``@``, tab or carriage return are prefixed
with a single quote so that a spreadsheet shows them as text.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
import sys
import tempfile
from pathlib import Path

from molid.guards import check_interrupted

__all__ = ["OutputRefused", "STANDARD_OUTPUT", "check_output_path", "check_output_folder",
           "atomic_output", "write_atomic", "neutralise_cell", "special_file"]

#: The output name that means standard output.
STANDARD_OUTPUT = "-"

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
        The output path (``Path("-")`` for standard output, which is never refused).

    Raises
    ------
    OutputRefused
        With a message saying why and what to do: an input, a folder, an existing file
        without ``force``, something other than a regular file (even with ``force``), a
        folder that does not exist or cannot be written.
    """
    if str(output) == STANDARD_OUTPUT:
        return Path(STANDARD_OUTPUT)
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
    kind = special_file(path)
    if kind:
        raise OutputRefused(f"{path}: is {kind}, not a regular file; molid writes only regular "
                            f"files (give '{STANDARD_OUTPUT}' to write to standard output)")
    if path.exists() and not force:
        raise OutputRefused(f"{path}: already exists; use --force to replace it")
    if not path.parent.exists():
        raise OutputRefused(f"{path}: the folder {path.parent} does not exist")
    if not path.parent.is_dir():
        raise OutputRefused(f"{path}: {path.parent} is not a folder")
    if not os.access(path.parent, os.W_OK | os.X_OK):
        raise OutputRefused(f"{path}: the folder {path.parent} cannot be written to")
    return path


def check_output_folder(folder, names, inputs=(), force: bool = False) -> Path:
    """Check a folder that will receive files of known ``names`` (``--plots``), before any work.

    The folder may not exist yet (its parent must); each file in it is checked as
    :func:`check_output_path` checks an output, so none of them is an input of the
    command, an existing file without ``force``, or something other than a regular file.

    Returns
    -------
    pathlib.Path
        The folder.

    Raises
    ------
    OutputRefused
        With a message saying why and what to do.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise OutputRefused(f"{folder}: is a file; a folder is needed here")
    if not folder.exists():
        if not folder.parent.is_dir():
            raise OutputRefused(f"{folder}: the folder {folder.parent} does not exist")
        if not os.access(folder.parent, os.W_OK | os.X_OK):
            raise OutputRefused(f"{folder}: the folder {folder.parent} cannot be written to")
        return folder
    for name in names:
        try:
            check_output_path(folder / name, inputs, force)
        except OutputRefused as problem:
            if "already exists" in str(problem):
                raise OutputRefused(f"{folder / name}: already exists; use --force to replace "
                                    "the files in this folder") from None
            raise
    return folder


def special_file(path) -> str | None:
    """Say what a path is when it exists and is not a regular file (a device, socket, pipe), else None.

    A symbolic link is judged by what it points to.
    """
    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return None
    for test, kind in ((stat.S_ISCHR, "a character device"), (stat.S_ISBLK, "a block device"),
                       (stat.S_ISFIFO, "a named pipe"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return kind
    return None


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
        The open temporary file; standard output when ``path`` is ``-``.

    Raises
    ------
    OutputRefused
        When the folder cannot be written to or the file cannot be completed (a full
        disk, a lost permission), with the system's reason.
    """
    if str(path) == STANDARD_OUTPUT:
        yield sys.stdout.buffer if "b" in mode else sys.stdout
        return
    path = Path(path)
    try:
        handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    except OSError as error:
        raise OutputRefused(f"{path}: cannot write in {path.parent} ({error.strerror})") from None
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
        if special_file(path):  # made a device or pipe since it was checked: never replace one
            raise OutputRefused(f"{path}: is not a regular file; not replaced")
        check_interrupted()  # never finish a file once the command was told to stop
        os.replace(temporary, path)
    except BaseException as error:
        try:
            os.unlink(temporary)
        except FileNotFoundError:
            pass
        if _cannot_write(error, (temporary, str(path))):
            raise OutputRefused(f"{path}: cannot be written ({error.strerror})") from None
        raise


#: What the system says when a file cannot be written or completed where it is.
_WRITE_ERRORS = {errno.ENOSPC, errno.EDQUOT, errno.EROFS, errno.EACCES, errno.EPERM, errno.EFBIG,
                 errno.EIO}


def _cannot_write(error, names) -> bool:
    """Tell whether an error is the output's own (a full disk, a lost permission), not the caller's."""
    return (isinstance(error, OSError) and error.errno in _WRITE_ERRORS
            and error.filename in (None, *names))


def write_atomic(path, data: bytes | str) -> None:
    """Write a file through a temporary file in the same folder and a rename (``-``: standard output)."""
    if str(path) == STANDARD_OUTPUT and isinstance(data, str):
        sys.stdout.write(data)  # text as text: stdout may be a text stream with no bytes below it
        sys.stdout.flush()
        return
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
