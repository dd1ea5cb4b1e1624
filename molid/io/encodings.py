"""Which text encoding a run file is in, and a message naming the row where it stops being text.

A file is read as the encoding its byte-order mark names (UTF-8, UTF-16 or
UTF-32, little- or big-endian; the Unicode Standard, chapter 23.8 "Specials",
byte order mark). Without a mark it is read as UTF-8 when it is valid UTF-8,
else as Windows-1252 (the single-byte encoding spreadsheets on Windows save CSV
in; common practice) with a note, else not at all: a file with bytes neither
encoding defines, or with NUL bytes (which no text holds, unless it is UTF-16
without a mark), is refused with a message naming the row of the first such byte.

The same check serves a file held in memory and a file streamed in blocks, so
both paths accept, note and refuse the same files with the same words.
"""

from __future__ import annotations

import codecs
import io
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field

from molid.io.problems import InputError

__all__ = ["TextEncoding", "blocks_of", "blocks_of_file", "detect_encoding", "row_of_offset", "text_stream"]

# Longest first: the UTF-32 little-endian mark starts with the UTF-16 one.
_MARKS = (
    (codecs.BOM_UTF32_LE, "utf-32", "UTF-32"),
    (codecs.BOM_UTF32_BE, "utf-32", "UTF-32"),
    (codecs.BOM_UTF8, "utf-8-sig", "UTF-8"),
    (codecs.BOM_UTF16_LE, "utf-16", "UTF-16"),
    (codecs.BOM_UTF16_BE, "utf-16", "UTF-16"),
)
_BLOCK = 1 << 22
_SAVE_AS = "save it as UTF-8 (in a spreadsheet: CSV UTF-8)"


@dataclass
class TextEncoding:
    """How to decode a file.

    Attributes
    ----------
    codec : str
        Python codec name (``utf-8-sig`` also removes a UTF-8 byte-order mark).
    notes : list of str
        Remarks for the user (a file read as Windows-1252, UTF-16 without a mark).
    """

    codec: str
    notes: list = field(default_factory=list)


def detect_encoding(blocks: Callable[[], Iterable[bytes]], name: str,
                    count_rows: Callable) -> TextEncoding:
    """Find a file's encoding by reading it through once (twice when it is not UTF-8).

    Parameters
    ----------
    blocks : callable
        Returns an iterator over the file's bytes in order, in blocks of any size;
        called again for each pass.
    name : str
        The file's name, for messages.
    count_rows : callable
        The rows of a text before an offending byte (see :func:`row_of_offset`).

    Returns
    -------
    TextEncoding
        The codec and any note.

    Raises
    ------
    InputError
        For a file that is not text in a known encoding, naming the row of the first bad byte.
    """
    head = b"".join(_first_bytes(blocks(), 4096))
    for mark, codec, label in _MARKS:
        if head.startswith(mark):
            _check_decodes(blocks, codec, name, count_rows, label)
            return TextEncoding(codec)
    nul = _first_offset(blocks(), b"\x00")
    if nul is not None:
        codec = _utf16_without_mark(head)
        if codec is None:
            raise InputError(
                f"{name}: not a text file: row {row_of_offset(blocks, nul, 'utf-8', count_rows)} holds a NUL "
                "byte (0x00), which text never does; give a CSV file or an .xlsx workbook")
        _check_decodes(blocks, codec, name, count_rows, "UTF-16")
        return TextEncoding(codec, [f"the file is UTF-16 without a byte-order mark; it was read as "
                                    f"{'little' if codec.endswith('le') else 'big'}-endian UTF-16"])
    bad_utf8 = _first_error(blocks, "utf-8")
    if bad_utf8 is None:
        return TextEncoding("utf-8-sig")
    offset, byte = bad_utf8
    bad_cp1252 = _first_error(blocks, "cp1252")
    if bad_cp1252 is not None:
        where, undefined = bad_cp1252
        raise InputError(
            f"{name}: the file is neither UTF-8 nor Windows-1252 text: row "
            f"{row_of_offset(blocks, where, 'cp1252', count_rows)} holds byte 0x{undefined:02X}, which "
            f"Windows-1252 does not define; {_SAVE_AS}")
    row = row_of_offset(blocks, offset, "cp1252", count_rows)
    return TextEncoding("cp1252", [
        f"the file is not UTF-8 (row {row} holds byte 0x{byte:02X}, the first that is not); it was "
        f"read as Windows-1252: {_SAVE_AS} to be sure names and units arrive as written"])


def row_of_offset(blocks: Callable[[], Iterable[bytes]], offset: int, codec: str,
                  count_rows: Callable) -> int:
    """Find the spreadsheet row of the byte at ``offset`` from the rows of the text before it.

    Parameters
    ----------
    blocks : callable
        Returns an iterator over the file's bytes.
    offset : int
        Position of the byte, from the start of the file.
    codec : str
        Codec the bytes before it decode in.
    count_rows : callable
        Given a callable that opens the text before the byte (a fresh text stream each
        call), its rows (see :func:`molid.io.delimited.count_rows`).

    Returns
    -------
    int
        The row, counting from 1.
    """
    def open_text():
        raw = io.BufferedReader(_Prefix(_first_bytes(blocks(), offset)))
        return io.TextIOWrapper(raw, encoding=codec, errors="replace", newline="")

    return count_rows(open_text)


class _Prefix(io.RawIOBase):
    """The bytes of a stream of blocks as a file, read in pieces (the text before a bad byte)."""

    def __init__(self, blocks: Iterable[bytes]):
        self._blocks = iter(blocks)
        self._left = b""

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        while not self._left:
            self._left = next(self._blocks, None)
            if self._left is None:
                self._left = b""
                return 0
        count = min(len(buffer), len(self._left))
        buffer[:count] = self._left[:count]
        self._left = self._left[count:]
        return count



def _first_bytes(stream: Iterable[bytes], count: int):
    """Yield the first ``count`` bytes of a stream of blocks."""
    left = count
    for block in stream:
        if left <= 0:
            return
        yield block[:left]
        left -= len(block)


def _first_offset(stream: Iterable[bytes], needle: bytes) -> int | None:
    """Offset of the first occurrence of a single byte in a stream of blocks, None when absent."""
    start = 0
    for block in stream:
        found = block.find(needle)
        if found >= 0:
            return start + found
        start += len(block)
    return None


def _first_error(blocks, codec: str) -> tuple[int, int] | None:
    """Offset and value of the first byte that does not decode in ``codec``; None when all do."""
    decoder = codecs.getincrementaldecoder(codec)()
    start = 0
    for block in blocks():
        # An incremental decoder holds back the start of a sequence cut by the block's end.
        held = len(decoder.getstate()[0])
        try:
            decoder.decode(block)
        except UnicodeDecodeError as error:
            offset = start + error.start - held
            return offset, _byte_at(blocks, offset)
        start += len(block)
    try:
        decoder.decode(b"", final=True)
    except UnicodeDecodeError as error:  # a sequence cut short by the end of the file
        offset = start - len(error.object) + error.start
        return offset, _byte_at(blocks, offset)
    return None


def _byte_at(blocks, offset: int) -> int:
    data = b"".join(_first_bytes(blocks(), offset + 1))
    return data[offset] if offset < len(data) else 0


def _check_decodes(blocks, codec: str, name: str, count_rows, label: str) -> None:
    """Raise naming the row of the first byte sequence that is not valid ``label`` text."""
    bad = _first_error(blocks, codec)
    if bad is not None:
        offset, byte = bad
        raise InputError(
            f"{name}: the file says it is {label} but row {row_of_offset(blocks, offset, codec, count_rows)} "
            f"holds bytes that are not (the first is 0x{byte:02X} at byte {offset}); {_SAVE_AS}")


def _utf16_without_mark(head: bytes) -> str | None:
    """'utf-16-le' or 'utf-16-be' when the start of a file looks like mostly-ASCII UTF-16, else None.

    Latin letters, digits and punctuation in UTF-16 have a zero high byte, so every
    second byte of such text is NUL (common practice for recognising UTF-16 without a mark).
    """
    sample = head[: len(head) - len(head) % 2]
    if len(sample) < 4:
        return None
    even, odd = sample[0::2], sample[1::2]
    share_even = even.count(0) / len(even)
    share_odd = odd.count(0) / len(odd)
    if share_odd >= 0.9 and share_even <= 0.1:
        return "utf-16-le"
    if share_even >= 0.9 and share_odd <= 0.1:
        return "utf-16-be"
    return None


def blocks_of(data: bytes) -> Callable[[], Iterable[bytes]]:
    """Blocks of bytes held in memory, for :func:`detect_encoding`."""
    view = memoryview(data)
    return lambda: (bytes(view[start:start + _BLOCK]) for start in range(0, len(data), _BLOCK))


def blocks_of_file(path) -> Callable[[], Iterable[bytes]]:
    """Blocks of a file on disk, for :func:`detect_encoding`."""
    def read():
        with open(path, "rb") as stream:
            while block := stream.read(_BLOCK):
                yield block
    return read


def text_stream(path, codec: str) -> io.TextIOWrapper:
    """Open a file as text in ``codec``, keeping line endings as written (CSV rules need them)."""
    return open(path, encoding=codec, newline="")
