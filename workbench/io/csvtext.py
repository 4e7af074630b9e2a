"""The one commented-CSV tokenizer every CSV reader of the package uses.

A commented CSV is UTF-8 text (a byte-order mark is read, not rejected) with:

- lines starting with ``#``: comments; ``# key: value`` comments carry metadata;
- blank lines, ignored;
- one or more *head* rows (the header, and for maps the full-load row), read as text;
- data rows with as many fields as the header.

The header is normalised (cells stripped, lower case). The reader says which columns are
numbers; the others (notes, vehicle names, ...) are kept out of the result. Numbers are parsed
by pandas' C parser; only when that fast parse fails is the file walked row by row, to name the
first bad row (``InputError("trip.csv row 812 column 2", "speed_km_per_h 'fast' is not a
number; ...")``).
Empty cells of numeric columns are NaN; the reader decides whether that is allowed.
"""

from __future__ import annotations

import csv
import io
import math
import warnings
from collections.abc import Callable, Collection
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.core.errors import InputError

_BOM = b"\xef\xbb\xbf"

#: Picks the numeric columns from the normalised header (may raise InputError).
NumericColumns = Callable[[tuple[str, ...]], Collection[int]]


@dataclass(frozen=True, eq=False)
class CsvTable:
    """A commented CSV, tokenised.

    Attributes
    ----------
    name : str
        What error messages call the file (its path).
    heads : tuple of tuple of str
        The head rows' cells, stripped; ``heads[0]`` is the header.
    header : tuple of str
        The header, normalised (stripped, lower case).
    columns : dict of int to numpy.ndarray
        Values of each numeric column by column index; NaN where a cell is empty.
    rows : numpy.ndarray or range
        File line number (1-based) of each data row (a range when they follow each other).
    comments : tuple of (int, str)
        Line number and text (after ``#``, stripped) of each comment line.
    head_lines : tuple of int
        File line number of each head row.
    """

    name: str
    heads: tuple[tuple[str, ...], ...]
    header: tuple[str, ...]
    columns: dict[int, np.ndarray] = field(repr=False)
    rows: np.ndarray | range = field(repr=False)
    comments: tuple[tuple[int, str], ...] = ()
    head_lines: tuple[int, ...] = ()

    def where(self, i: int) -> str:
        """Name data row ``i`` for an error message (``file row N``)."""
        return f"{self.name} row {int(self.rows[i])}"

    def metadata(self, keys: Collection[str]) -> dict[str, tuple[int, str]]:
        """``# key: value`` comments whose key is in ``keys``: key -> (line number, value)."""
        out = {}
        for lineno, text in self.comments:
            key, sep, value = text.partition(":")
            key = key.strip().lower()
            if sep and key in keys:
                out[key] = (lineno, value.strip())
        return out


def read_file_bytes(path: str | Path) -> bytes:
    """The bytes of an input file, or one line saying why it cannot be read.

    Parameters
    ----------
    path : str or pathlib.Path
        The file.

    Returns
    -------
    bytes

    Raises
    ------
    InputError
        Missing, a folder, or unreadable.
    """
    p = Path(path)
    try:
        return p.read_bytes()
    except FileNotFoundError:
        raise InputError(str(path), "file not found; check the path") from None
    except IsADirectoryError:
        raise InputError(str(path), "is a folder; name a file") from None
    except (OSError, ValueError) as exc:
        raise InputError(str(path), f"cannot read the file ({exc.__class__.__name__})") from None


def parse_csv(data: bytes, name: str, numeric: NumericColumns, *,
              head_rows: int = 1) -> CsvTable:
    """Tokenise a commented CSV.

    Parameters
    ----------
    data : bytes
        The file's contents.
    name : str
        What error messages call the file.
    numeric : callable
        Gets the normalised header, returns the indices of the columns to read as numbers
        (and may raise InputError about the header). Other columns are ignored.
    head_rows : int, optional
        Rows read as text before the data (the header first).

    Returns
    -------
    CsvTable

    Raises
    ------
    InputError
        Not UTF-8, no header or data rows, a row with the wrong number of fields, a cell of a
        numeric column that is not a number; the message names the file and row.
    """
    bom = len(_BOM) if data.startswith(_BOM) else 0
    heads, head_lines, comments, offset, lineno = _heads(data, bom, name, head_rows)
    header = tuple(c.lower() for c in heads[0])
    width = len(header)
    for cells, ln in zip(heads[1:], head_lines[1:], strict=True):
        if len(cells) != width:
            raise InputError(f"{name} row {ln}", f"has {len(cells)} fields, the header has "
                                                 f"{width}; make every row as wide as it")
    wanted = sorted(set(numeric(header)))
    table = _fast(data, offset, header, wanted, lineno)
    if table is None:
        columns, rows, more = _slow(data[offset:], name, header, wanted, lineno)
    else:
        columns, rows, more = table
    if len(rows) == 0:
        raise InputError(name, "no header and data rows found")
    return CsvTable(name=name, heads=heads, header=header, columns=columns, rows=rows,
                    comments=(*comments, *more), head_lines=head_lines)


def _decode(raw: bytes, name: str, lineno: int) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        row = lineno + raw[:exc.start].count(b"\n")
        raise InputError(f"{name} row {row}", "is not UTF-8 text; save the file as UTF-8 "
                                              "(\"CSV UTF-8\" in a spreadsheet)") from None


def _split(line: str, name: str, lineno: int) -> list[str]:
    try:
        return [c.strip() for c in next(csv.reader([line]))]
    except csv.Error as exc:  # a lone carriage return or a stray quote inside the line
        raise InputError(f"{name} row {lineno}", f"cannot be split into fields ({exc}); save "
                         "the file as plain CSV") from None


def _heads(data: bytes, offset: int, name: str, head_rows: int
           ) -> tuple[tuple[tuple[str, ...], ...], tuple[int, ...], list[tuple[int, str]], int,
                      int]:
    """Head rows and the comments before the data; byte offset and line number of the rest."""
    heads: list[tuple[str, ...]] = []
    lines: list[int] = []
    comments: list[tuple[int, str]] = []
    lineno = 1
    while len(heads) < head_rows:
        if offset >= len(data):
            raise InputError(name, "no header and data rows found")
        end = data.find(b"\n", offset)
        end = len(data) if end < 0 else end + 1
        text = _decode(data[offset:end], name, lineno).strip()
        if text.startswith("#"):
            comments.append((lineno, text[1:].strip()))
        elif text:
            heads.append(tuple(_split(text, name, lineno)))
            lines.append(lineno)
        offset, lineno = end, lineno + 1
    return tuple(heads), tuple(lines), comments, offset, lineno


class _Window(io.RawIOBase):
    """A read-only stream over part of a bytes object, without copying it."""

    def __init__(self, view: memoryview) -> None:
        self._view = view
        self._pos = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer: memoryview) -> int:  # type: ignore[override]
        n = min(len(buffer), len(self._view) - self._pos)
        buffer[:n] = self._view[self._pos:self._pos + n]
        self._pos += n
        return n


def _fast(data: bytes, offset: int, header: tuple[str, ...], wanted: list[int], first: int
          ) -> tuple[dict[int, np.ndarray], np.ndarray | range, list[tuple[int, str]]] | None:
    """pandas' C parser on the data from line ``first`` (at byte ``offset``) on; None when it
    fails or the file needs a closer look."""
    width = len(header)
    end = len(data)
    while end > offset and data[end - 1] in b" \t\r\n":
        end -= 1
    body = memoryview(data)[offset:end]
    # Without a '#' after the header, every line must be a data row: blank lines are then
    # read as rows of NaN (and sent to the slow pass), so row i is line first + i.
    plain = data.find(b"#", offset, end) < 0
    try:
        with warnings.catch_warnings():
            # a row wider than the header is cut by pandas with a warning: let the slow pass
            # name it instead of losing its cells
            warnings.simplefilter("error", pd.errors.ParserWarning)
            frame = pd.read_csv(io.BufferedReader(_Window(body)), header=None,
                                names=list(range(width)),
                                index_col=False, comment=None if plain else "#",
                                skip_blank_lines=not plain,
                                dtype=dict.fromkeys(wanted, np.float64),
                                engine="c", encoding="utf-8")
    except (ValueError, pd.errors.ParserError, pd.errors.ParserWarning, UnicodeDecodeError,
            pd.errors.EmptyDataError):
        return None
    columns = {j: frame[j].to_numpy(dtype=np.float64) for j in wanted}
    if any(math.isnan(c.sum()) for c in columns.values()):  # NaN (or +inf and -inf)
        return None  # an empty cell, or a short row: the slow pass tells them apart
    n = len(frame)
    if plain:
        return columns, range(first, first + n), []
    buf = np.frombuffer(body, dtype=np.uint8)
    starts = np.concatenate(([0], np.flatnonzero(buf == 10) + 1))
    starts = starts[starts < buf.size]
    ends = np.concatenate((starts[1:], [buf.size]))
    solid = np.cumsum(~np.isin(buf, (9, 10, 13, 32)))
    count = solid[ends - 1] - np.where(starts > 0, solid[starts - 1], 0)
    comment = buf[starts] == ord("#")
    data_line = (count > 0) & ~comment
    if int(data_line.sum()) != n:
        return None
    more = [(first + int(i), bytes(buf[starts[i]:ends[i]]).decode("utf-8").strip()[1:].strip())
            for i in np.flatnonzero(comment)]
    return columns, first + np.flatnonzero(data_line), more


def _slow(body: bytes, name: str, header: tuple[str, ...], wanted: list[int], first: int
          ) -> tuple[dict[int, np.ndarray], np.ndarray, list[tuple[int, str]]]:
    """Row by row: the first bad row raises; a good file gives the same table as the fast pass."""
    text = _decode(body, name, first)
    width = len(header)
    values: list[list[float]] = []
    rows: list[int] = []
    comments: list[tuple[int, str]] = []
    for lineno, line in enumerate(text.splitlines(), start=first):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append((lineno, s[1:].strip()))
            continue
        cells = _split(s.split("#", 1)[0] if "#" in s and '"' not in s else s, name, lineno)
        if len(cells) != width:
            raise InputError(f"{name} row {lineno}", f"has {len(cells)} fields, the header has "
                                                     f"{width}; make every row as wide as it")
        row = []
        for j in wanted:
            cell = cells[j]
            if not cell:
                row.append(math.nan)
                continue
            try:
                row.append(float(cell))
            except ValueError:
                raise InputError(f"{name} row {lineno} column {j + 1}",
                                 f"{header[j]} '{cell}' is not a number; write a plain number "
                                 "such as 12.5") from None
        values.append(row)
        rows.append(lineno)
    grid = np.array(values, dtype=float).reshape(len(values), len(wanted))
    return {j: grid[:, k].copy() for k, j in enumerate(wanted)}, np.array(rows, dtype=int), \
        comments
