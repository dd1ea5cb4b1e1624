"""Delimited text (CSV) as rows of cells: the separator, the header, and the lines that are malformed.

One reader serves a file held in memory and a file streamed in chunks, so both
find the same header, split every line the same way and name the same rows in
the same words. Cells are split as RFC 4180 describes CSV (common practice): a
cell in double quotes may hold the separator, line breaks and doubled quotes;
spaces after a separator are skipped.

Rows are numbered as a spreadsheet numbers them: one row per record, so a cell
holding a line break does not add a row. A line that cannot be matched to the
header is a problem of its own row, never of the file:

- more cells than the header (an unquoted decimal comma, a stray separator): an
  error naming the row, with its text; its cells are not read, so no column shifts;
- a quote that opens a cell and is never closed: an error for that line alone, and
  the lines below it are read as they stand (a spreadsheet would take the rest of the
  file into one cell);
- fewer cells than the header: the missing cells at the end are read as empty, with a
  warning when molid reads one of their columns (a cell left out in the middle would
  shift the others);
- a separator after the last cell of every row (a trailing comma) is recognised from
  the first rows and its empty cell dropped, with a note.
"""

from __future__ import annotations

import csv
import io
import itertools
import re
import sys
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from molid.io.header_row import column_labels, header_line_notes, join_header_lines, title_note, title_text
from molid.io.headers import HEADER_SEARCH_ROWS, is_header_row, is_read, parse_header
from molid.io.problems import InputError

__all__ = [
    "SEPARATORS",
    "HEAD_CHARACTERS",
    "Record",
    "RecordReader",
    "Layout",
    "text_head",
    "find_layout",
    "frames",
    "count_rows",
    "raise_first_error",
]

SEPARATORS = (",", ";", "\t")
#: Characters at the start of a text in which the header and the first data rows are looked for.
HEAD_CHARACTERS = 1 << 20
#: Data rows below the header that decide whether every row ends with a separator too many.
SAMPLE_ROWS = 50
_SHOWN = 160
_CHUNK = 10_000
#: The type pandas gives text read from CSV (pyarrow-backed strings from pandas 3, else objects).
_TEXT_TYPE = pd.Series([""], dtype="str").dtype
_DECIMAL_COMMA = (re.compile(r"^[+-]?\d+$"), re.compile(r"^\d+([eE][+-]?\d+)?$"))


def _allow_long_cells() -> None:
    """Lift the csv module's 128 kB cell limit: a long cell is the user's text, kept whole."""
    limit = sys.maxsize
    while True:
        try:
            csv.field_size_limit(limit)
            return
        except OverflowError:  # a C long is 32 bits on some platforms
            limit //= 2


@dataclass
class Record:
    """One row of delimited text.

    Attributes
    ----------
    cells : list of str
        The cells as split, quotes removed.
    text : str
        The line or lines as written, for messages.
    unclosed : bool
        A quote opens a cell on this line and is never closed; the line was read alone.
    failure : str
        Why the csv module could not split it ("" when it could).
    """

    cells: list
    text: str
    unclosed: bool = False
    failure: str = ""


class _Lines:
    """The physical lines of a text stream, with lines handed back and those taken recorded."""

    def __init__(self, stream):
        self._stream = stream
        self._back: list = []
        self.taken: list | None = None
        self.ended = False

    def __iter__(self):
        return self

    def __next__(self) -> str:
        if self._back:
            line = self._back.pop()
        else:
            line = self._stream.readline()
            if not line:
                self.ended = True
                raise StopIteration
        if self.taken is not None:
            self.taken.append(line)
        return line

    def take(self, count: int) -> list:
        """Up to ``count`` lines (fewer at the end of the text)."""
        taken = []
        while self._back and len(taken) < count:
            taken.append(self._back.pop())
        if len(taken) < count:
            taken.extend(itertools.islice(self._stream, count - len(taken)))
        return taken

    def give_back(self, lines) -> None:
        self._back.extend(reversed(lines))


@dataclass
class _Block:
    """Consecutive records of one line each, split at once.

    Lines without quotes are split by Arrow's string kernels (``parts``, a ListArray);
    lines with quotes by the csv module in one call (``cells``, lists of str).
    """

    start: int
    lines: list
    parts: object = None
    cells: list | None = None


class Rows:
    """Consecutive records of a text: blocks of lines without quotes, and records read one by one."""

    def __init__(self):
        self.blocks: list = []
        self.records: dict = {}
        self.count = 0

    def __len__(self) -> int:
        return self.count

    def add_block(self, lines: list, parts=None, cells=None) -> None:
        self.blocks.append(_Block(self.count, lines, parts, cells))
        self.count += len(lines)

    def add_record(self, record: Record) -> None:
        self.records[self.count] = record
        self.count += 1

    def as_records(self) -> list:
        """Every record as a :class:`Record`, in order (for the first rows of a text)."""
        found = dict(self.records)
        for block in self.blocks:
            cells = block.parts.to_pylist() if block.cells is None else block.cells
            for offset, (row, line) in enumerate(zip(cells, block.lines, strict=True)):
                found[block.start + offset] = Record(row, line)
        return [found[position] for position in range(self.count)]


class RecordReader:
    """Split a text stream into records (rows), recovering from unclosed quotes.

    Parameters
    ----------
    stream : text file
        Opened with ``newline=""`` so line breaks inside quoted cells are kept as written.
    separator : str
        ``","``, ``";"`` or a tab.
    accept : callable, optional
        Given the cells of a record that spans several lines, whether it is a real row
        (a quoted cell holding line breaks). When it is not, its quote is taken as
        unclosed: its first line becomes a row alone and the lines after it are read again.

    Notes
    -----
    Lines without a quote are split by the separator in blocks, with pyarrow's string
    kernels, exactly as the csv module would split them; lines with a quote go through
    the csv module one record at a time.
    """

    def __init__(self, stream, separator: str, accept=None):
        _allow_long_cells()
        self.separator = separator
        self.accept = accept
        self._lines = _Lines(stream)
        self._csv = csv.reader(self._lines, delimiter=separator, skipinitialspace=True, strict=False)

    def read(self, count: int) -> Rows:
        """Read up to ``count`` records (fewer at the end of the text).

        Parameters
        ----------
        count : int
            How many.

        Returns
        -------
        Rows
            The records, in order.
        """
        rows, lines = Rows(), self._lines
        while len(rows) < count:
            batch = lines.take(min(count - len(rows), _CHUNK))
            if not batch:
                break
            if '"' not in "".join(batch):
                rows.add_block(batch, parts=self._split(batch))
                continue
            done = self._quoted_lines(rows, batch)
            lines.give_back(batch[done:])
            if done < len(batch):
                rows.add_record(self._quoted())
        return rows

    def _quoted_lines(self, rows: Rows, batch: list) -> int:
        """Split a batch with quotes in one call of the csv module, while each record is one line.

        Stops before the first record that spans lines, fails, or reaches the batch's last
        line (its quote may close in lines not yet read): :meth:`_quoted` reads that one with
        care. Returns the lines read.
        """
        last = len(batch) - 1
        reader = csv.reader(batch, delimiter=self.separator, skipinitialspace=True, strict=False)
        try:  # the usual case first, in one call: every record one line
            found = list(itertools.islice(reader, last))
            clean = reader.line_num == len(found)
        except csv.Error:
            clean = False
        if not clean:  # again, record by record, up to the first that spans lines or fails
            reader = csv.reader(batch, delimiter=self.separator, skipinitialspace=True, strict=False)
            found = []
            try:
                for cells in reader:
                    if reader.line_num != len(found) + 1 or len(found) == last:
                        break
                    found.append(cells)
            except csv.Error:
                pass  # the careful reading of this record says what is wrong with it
        if found:
            rows.add_block(batch[:len(found)], cells=found)
        return len(found)

    def _split(self, lines: list):
        """Split lines without quotes into cells, skipping spaces after a separator as csv does."""
        import pyarrow as pa
        import pyarrow.compute as pc

        text = pc.utf8_rtrim(pa.array(lines, type=pa.large_string()), characters="\r\n")
        parts = pc.split_pattern(text, pattern=self.separator)
        if any(" " in line for line in lines):
            values = pc.utf8_ltrim(parts.flatten(), characters=" ")
            parts = type(parts).from_arrays(parts.offsets, values)
        return parts

    def _well_formed(self, taken: list) -> bool:
        """Whether a record spanning lines closes each quote just before a separator or a line's end.

        RFC 4180 (2.5-2.7) quotes a whole cell; a quote that "closes" in the middle of a
        cell is another line's quote, so the record's first quote was never closed.
        """
        try:
            for _ in csv.reader(taken, delimiter=self.separator, skipinitialspace=True, strict=True):
                pass
        except csv.Error:
            return False
        return True

    def _quoted(self) -> Record:
        """Read one record that has a quote in it, with the csv module."""
        lines = self._lines
        lines.taken, lines.ended = [], False
        try:
            cells, failure = next(self._csv), ""
        except csv.Error as error:
            cells, failure = [], str(error)
        finally:
            taken, lines.taken = lines.taken, None
        text = "".join(taken)
        if failure:
            return Record([], text, failure=failure)
        spans = len(taken) > 1
        if lines.ended or (spans and not (self._well_formed(taken)
                                          and (self.accept is None or self.accept(cells)))):
            # The quote is never closed (or closes rows later, in another cell): read this
            # line alone, as if the quote closed at its end, and the lines after it again.
            lines.give_back(taken[1:])
            first = taken[0].rstrip("\r\n")
            cells = next(csv.reader([first], delimiter=self.separator, skipinitialspace=True), [])
            return Record(cells, taken[0], unclosed=True)
        return Record(cells, text)


def text_head(text: str, complete: bool) -> str:
    """Cut the start of a text in which to look for the layout: whole lines, unless it is all there.

    Parameters
    ----------
    text : str
        The first characters of a text (up to :data:`HEAD_CHARACTERS`, or more).
    complete : bool
        True when ``text`` is the whole text.

    Returns
    -------
    str
        At most :data:`HEAD_CHARACTERS` characters, ending at a line break unless the text ends there.
    """
    if complete and len(text) <= HEAD_CHARACTERS:
        return text
    head = text[:HEAD_CHARACTERS]
    cut = max(head.rfind("\n"), head.rfind("\r"))
    return head[:cut + 1] if cut >= 0 else head


@dataclass
class Layout:
    """How a delimited text is laid out.

    Attributes
    ----------
    separator : str
        The cell separator.
    header_row : int
        The header's spreadsheet row (rows above it are titles).
    labels : list of str
        Column labels, unique (a repeated header gets ``.1``, a blank one ``Unnamed: n``).
    trailing : bool
        Every row ends with a separator after its last cell; the empty cell this makes is dropped.
    read : list of bool
        Per column, whether molid reads it (a cell missing there gets a warning).
    notes : list of str
        Remarks on the layout (titles skipped, a trailing separator, a header holding a line break).
    """

    separator: str
    header_row: int
    labels: list
    trailing: bool = False
    read: list = field(default_factory=list)
    notes: list = field(default_factory=list)

    @property
    def width(self) -> int:
        """Cells a data row has."""
        return len(self.labels)

    def accepts(self, cells) -> bool:
        """Whether a record spanning lines has the cells of a row (else its quote was unclosed)."""
        return len(cells) == self.width or (
            self.trailing and len(cells) == self.width + 1 and not cells[-1].strip())


def _is_blank(cells) -> bool:
    return all(not cell.strip() for cell in cells)


def find_layout(head: str, run_file: bool = True) -> Layout:
    """Find the separator, the header row and the row width from the start of a text.

    The header is the first row, within the first
    :data:`~molid.io.headers.HEADER_SEARCH_ROWS`, whose cells name every column a
    run file needs, split by the separator used most on that row that does so. When
    no row does, the separator is the one that splits the most rows into the same
    number of cells, more than one, and the header is the first row so split (the
    first row of a file that is not a run file), so that the message about missing
    columns lists the header's cells, not a title's.

    Parameters
    ----------
    head : str
        The start of the text (see :func:`text_head`).
    run_file : bool
        Whether the text is a run file; other files (answer keys, water fills) have
        their header in the first row.

    Returns
    -------
    Layout
        The layout; its ``notes`` say what was skipped or dropped.
    """
    wanted = HEADER_SEARCH_ROWS + 1 + SAMPLE_ROWS
    tried = {separator: RecordReader(io.StringIO(head, newline=""), separator).read(wanted).as_records()
             for separator in SEPARATORS}
    found = _header_position(tried)
    if found is not None:
        separator, index = found
    else:
        separator, width = _likely_separator(tried)
        index = next((position for position, record in enumerate(tried[separator][:HEADER_SEARCH_ROWS])
                      if len(record.cells) == width), 0) if run_file else 0
    records = tried[separator]
    notes: list = []
    if index:
        titles = [title_text(record.cells, separator) for record in records[:index]]
        notes.append(title_note(index + 1, [title for title in titles if title]))
    cells = records[index].cells if index < len(records) else []
    header = [join_header_lines(cell) for cell in cells]
    notes.extend(header_line_notes(cells, index + 1))
    samples = [record.cells for record in records[index + 1:index + 1 + SAMPLE_ROWS]
               if not _is_blank(record.cells)]
    header, trailing = _trailing_separator(header, samples)
    if trailing:
        shown = "a tab" if separator == "\t" else f"'{separator}'"
        notes.append(f"the rows end with {shown} after their last cell; the empty cell this makes "
                     "was not read as a column")
    labels = column_labels(header)
    return Layout(separator, index + 1, labels, trailing, [_reads(label) for label in labels], notes)


def _header_position(tried: dict):
    """Find the separator and position of the first row naming every required column (None: no row)."""
    for index in range(HEADER_SEARCH_ROWS):
        counts = [(tried[separator][index].text.count(separator), separator)
                  for separator in SEPARATORS if index < len(tried[separator])]
        # the separator used most on the row first: a title's comma must not split the header
        for count, separator in sorted(counts, key=lambda pair: -pair[0]):
            cells = tried[separator][index].cells
            if count and is_header_row([join_header_lines(cell) for cell in cells]):
                return separator, index
    return None


def _likely_separator(tried: dict) -> tuple[str, int]:
    """Pick the separator that splits the most first rows into one number of cells (more than one).

    Returns the separator and that number of cells (0 when no separator splits a row).
    """
    def score(separator):
        widths = [len(record.cells) for record in tried[separator] if not _is_blank(record.cells)]
        widths = [width for width in widths if width > 1]
        if not widths:
            return (0, 0)
        common = max(set(widths), key=lambda width: (widths.count(width), width))
        return (widths.count(common), common)

    separator = max(SEPARATORS, key=score)  # max keeps the first of equals: comma, semicolon, tab
    return separator, score(separator)[1]


def _trailing_separator(header: list, samples: list) -> tuple[list, bool]:
    """Recognise a separator after the last cell of most rows: drop the empty cell it makes.

    Most of the first data rows, not all, decide it, so that one stray line among them
    is reported as its own row instead of turning every row into one with a cell too many.
    """
    width = len(header)
    if width > 1 and not header[-1].strip():
        # the header ends with one too: its blank last column is the separator's when most rows
        # leave it empty (a row with a cell there is then a row with a cell too many)
        fits = sum(len(cells) == width - 1 or (len(cells) == width and not cells[-1].strip())
                   for cells in samples)
        return (header[:-1], True) if 2 * fits > len(samples) else (header, False)
    fits = sum(len(cells) == width + 1 and not cells[-1].strip() for cells in samples)
    return header, bool(samples) and 2 * fits > len(samples)


def _reads(label: str) -> bool:
    try:
        return is_read(parse_header(label).name)
    except InputError:
        return False


def frames(stream, layout: Layout, chunk_rows: int = _CHUNK):
    """Read a text's data rows below its header as frames of text cells, ``chunk_rows`` at a time.

    Parameters
    ----------
    stream : text file
        The whole text from its start, opened with ``newline=""``.
    layout : Layout
        Its layout (see :func:`find_layout`).
    chunk_rows : int
        Rows per frame.

    Yields
    ------
    pandas.DataFrame
        Cells as text ("" where blank), labelled by the header. ``attrs["first_row"]``
        is the spreadsheet row of its first row; ``attrs["line_problems"]`` maps the
        position of each malformed row to ``(kind, message)``, kind ``"error"``,
        ``"warning"`` or ``"note"``.
    """
    reader = RecordReader(stream, layout.separator)
    reader.read(layout.header_row)  # the titles and the header, read as the layout read them
    reader.accept = layout.accepts
    first_row = layout.header_row + 1
    while rows := reader.read(chunk_rows):
        yield frame_from_rows(rows, layout, first_row)
        first_row += len(rows)


def frame_from_rows(rows: Rows, layout: Layout, first_row: int) -> pd.DataFrame:
    """Turn records into a frame of text cells, judging each that does not fit the header.

    Parameters
    ----------
    rows : Rows
        Consecutive records.
    layout : Layout
        The text's layout.
    first_row : int
        Spreadsheet row of the first record.

    Returns
    -------
    pandas.DataFrame
        See :func:`frames`.
    """
    import pyarrow as pa

    width = layout.width
    pieces: list = [[] for _ in range(width)]
    positions, odd = [], dict(rows.records)
    split_rows: dict = {}  # position -> cells, for records split by the csv module
    for block in rows.blocks:
        if block.cells is not None:
            fits = [len(cells) == width for cells in block.cells]
            if all(fits):  # the usual case: the block's columns at once
                for column in range(width):
                    pieces[column].append(pa.array([cells[column] for cells in block.cells],
                                                   type=pa.large_string()))
                positions.append(np.arange(block.start, block.start + len(fits)))
                continue
            for position, (cells, line, fit) in enumerate(zip(block.cells, block.lines, fits, strict=True),
                                                          start=block.start):
                if fit:
                    split_rows[position] = cells
                else:
                    odd[position] = Record(cells, line)
            continue
        good, starts, values = _fitting_lines(block.parts, layout)
        for offset in np.flatnonzero(~good):
            odd[block.start + int(offset)] = Record(block.parts[int(offset)].as_py(), block.lines[offset])
        chosen = starts[good]
        if chosen.size:
            for column in range(width):
                pieces[column].append(values.take(pa.array(chosen + column)))
            positions.append(block.start + np.flatnonzero(good))
    problems = {}
    for position in sorted(odd):
        record = odd[position]
        split_rows[position], problem = (record.cells, None) if len(record.cells) == width \
            and not record.unclosed and not record.failure else _judge(record, layout, first_row + position)
        if problem is not None:
            problems[position] = problem
    if split_rows:
        ordered = sorted(split_rows)
        positions.append(np.asarray(ordered, dtype=np.int64))
        for column in range(width):
            pieces[column].append(pa.array([split_rows[position][column] for position in ordered],
                                           type=pa.large_string()))
    order = np.argsort(np.concatenate(positions), kind="stable") if positions else np.zeros(0, int)
    frame = pd.DataFrame({label: _text_series(pieces[column], order)
                          for column, label in enumerate(layout.labels)}, index=range(len(rows)))
    frame.attrs["first_row"] = first_row
    if problems:
        frame.attrs["line_problems"] = problems
    return frame


def _fitting_lines(parts, layout: Layout):
    """Which lines of a block fit the header, where each line's cells start, and the cells."""
    import pyarrow.compute as pc

    offsets = np.asarray(parts.offsets)
    starts = offsets[:-1] - offsets[0]
    lengths = np.diff(offsets)
    values = parts.flatten()
    good = lengths == layout.width
    if layout.trailing:  # a last cell more, empty: the trailing separator's
        extra = np.flatnonzero(lengths == layout.width + 1)
        if extra.size:
            last = pc.utf8_trim_whitespace(values.take(starts[extra] + layout.width))
            good[extra[np.asarray(pc.equal(last, ""))]] = True
    return good, starts, values


def _text_series(pieces: list, order: np.ndarray) -> pd.Series:
    """One column of text cells, in row order, with the string type pandas' CSV reader gives."""
    import pyarrow as pa

    array = pa.concat_arrays(pieces) if pieces else pa.array([], type=pa.large_string())
    if len(order) and not (order[1:] > order[:-1]).all():
        array = array.take(pa.array(order))
    if isinstance(_TEXT_TYPE, pd.StringDtype) and _TEXT_TYPE.storage == "pyarrow":
        return array.to_pandas(types_mapper=lambda _: _TEXT_TYPE)
    return pd.Series(array.to_pylist(), dtype=_TEXT_TYPE)


def _shown(text: str) -> str:
    text = text.rstrip("\r\n")
    return text if len(text) <= _SHOWN else text[:_SHOWN - 1] + "…"


def _judge(record: Record, layout: Layout, row: int):
    """Judge a record that does not fit the header: its cells, and its problem (None: it has none)."""
    width, cells = layout.width, record.cells
    blank = [""] * width
    reads = f" The row reads: {_shown(record.text)}"
    if record.failure:
        return blank, ("error", f"the whole row: cannot be split into cells ({record.failure}).{reads}")
    if record.unclosed:
        return blank, ("error", "the whole row: a quote (\") opens a cell and is never closed, so the row "
                                "cannot be split into its cells; close the quote or remove it (the rows "
                                f"below were read on their own).{reads}")
    if _is_blank(cells):
        return blank, None
    if layout.trailing and len(cells) == width + 1 and not cells[-1].strip():
        return cells[:width], None
    if len(cells) > width:
        return blank, ("error", f"the whole row: it has {len(cells)} cells where the header has "
                                f"{width}, so its cells cannot be matched to their columns"
                                f"{_extra_hint(cells, width, layout.separator)}; none was read.{reads}")
    missing = [label for label, read in zip(layout.labels[len(cells):], layout.read[len(cells):],
                                            strict=True) if read]
    padded = cells + [""] * (width - len(cells))
    if not missing:
        return padded, ("note", "some rows have fewer cells than the header: the missing cells at their "
                                "end, in columns molid does not read, were read as empty")
    listed = ", ".join(f"'{label}'" for label in missing)
    return padded, ("warning", f"row {row}: it has {len(cells)} cells where the header has {width}; "
                               f"the cells of {listed} were read as empty (if a cell in the middle was "
                               "left out, the cells after it stand in the wrong columns)")


def _extra_hint(cells: list, width: int, separator: str) -> str:
    """Say why a row may have too many cells: a decimal comma, or separators at its end."""
    if separator == ",":
        for left, right in zip(cells, cells[1:], strict=False):
            if _DECIMAL_COMMA[0].match(left.strip()) and _DECIMAL_COMMA[1].match(right.strip()):
                return (f" ('{left.strip()},{right.strip()}' looks like a number with a decimal comma: "
                        f"write {left.strip()}.{right.strip()}, or put the cell in double quotes)")
    extra = cells[width:]
    if _is_blank(extra):
        return f" (it ends with {len(extra)} separator(s) too many)"
    return f" (its cells after the last column read: {_shown(separator.join(extra))})"


def count_rows(open_text) -> int:
    """Count the rows of a text: the spreadsheet row its next character would be in (1 when empty).

    Parameters
    ----------
    open_text : callable
        Opens the text (the start of a file, before a byte that is not text) as a text
        stream with ``newline=""``; called twice, for the layout and for the rows.

    Returns
    -------
    int
        Rows read in full, plus the row that is cut off (or begins) at the text's end.
    """
    with open_text() as stream:
        head = stream.read(HEAD_CHARACTERS + 1)
    if not head:
        return 1
    separator = find_layout(text_head(head, len(head) <= HEAD_CHARACTERS), run_file=False).separator
    records = 0
    with open_text() as stream:
        tail = _Tail(stream)
        reader = RecordReader(tail, separator)
        while rows := reader.read(_CHUNK):
            records += len(rows)
    return records + (1 if tail.last.endswith(("\n", "\r")) else 0)


class _Tail:
    """A text stream read by lines that remembers the last line it gave."""

    def __init__(self, stream):
        self._stream = stream
        self.last = ""

    def readline(self) -> str:
        line = self._stream.readline()
        self.last = line or self.last
        return line

    def __iter__(self):
        return self

    def __next__(self) -> str:
        line = self.readline()
        if not line:
            raise StopIteration
        return line


def raise_first_error(frame: pd.DataFrame, name: str) -> None:
    """Stop at a frame's first malformed row, for files whose readers cannot report a row's problem.

    Parameters
    ----------
    frame : pandas.DataFrame
        A frame from :func:`frames`.
    name : str
        The file's name.

    Raises
    ------
    InputError
        Naming the row and what is wrong with it.
    """
    problems = frame.attrs.get("line_problems", {})
    for position, (kind, message) in sorted(problems.items()):
        if kind == "error":  # the file stops here, so no row below is read
            message = message.replace(" (the rows below were read on their own)", "")
            raise InputError(f"{name}: row {frame.attrs['first_row'] + position}, {message}")
