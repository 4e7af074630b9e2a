"""Strategies and checks shared by the fuzz tests (tests/test_fuzz_*.py).

Each loader is fed structured mutations of a valid input and random bytes; the checks are the
promise of ``workbench.core.errors``: the only exception a user can see is an ``InputError``
whose location is non-empty and whose text is one line, and no NaN or infinity reaches a
result.
"""

from __future__ import annotations

import atexit
import copy
import dataclasses
import datetime as dt
import itertools
import math
import shutil
import tempfile
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

import numpy as np
from hypothesis import event
from hypothesis import strategies as st

from workbench.core.errors import InputError

#: Numbers that break naive readers: NaN, infinities, the float range's ends, huge integers.
NASTY_NUMBERS = st.one_of(
    st.sampled_from([math.nan, math.inf, -math.inf, 1e308, -1e308, 5e-324, 0.0, -0.0, 1e15,
                     1e16, -1.0, 10**30, -(10**30), 2**63, 2**64, 0, 1, -1]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**40), max_value=10**40),
)
#: Pieces of quantity and price text: numbers (good and bad), units, operators, codes.
TEXT_PIECES = st.sampled_from([
    "1", "0", "-5", "1.45", "1e400", "1e-400", "nan", "inf", "9 ** 9 ** 9", "1 / 0", "**", "^",
    "+", "-", "*", "/", "(", ")", "((", "))", "per", "km", "m", "L", "L/100 km", "kg", "Sm3",
    "kWh", "GJ", "%", "percent", "degC", "month", "year", "t", "bar", "W", "kW", "h", "s",
    "m**3", "m^9", "m3", "m³", "HHV", "LHV", "EUR", "KBD", "XCU", "never", "foo", "__class__",
    "_", " ", "\t", "\n", "\x00", "\ufeff", "é", "1000", "5.660 lb", "g/km", "g/kWh", "ppm",
    "US_gallon", "GGE", "currency_unit", "dimensionless", "e", "E5", ".", "..", "1.2.3",
])
QUANTITY_TEXT = st.lists(TEXT_PIECES, min_size=0, max_size=6).map(" ".join) | st.text(
    max_size=40)
#: Any value a TOML file can hold, kept small.
TOML_SCALARS = st.one_of(
    NASTY_NUMBERS, st.booleans(), QUANTITY_TEXT, st.text(max_size=20),
    st.integers(1000, 6000).map(lambda n: "x" * n), st.dates(), st.times(), st.datetimes(),
)
TOML_VALUES = st.recursive(
    TOML_SCALARS,
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(
        st.sampled_from(["kind", "low", "high", "mode", "mean", "sd", "value", "per", "id",
                         "x", "taxi", "van", "bus", "preset", "parts"]) | st.text(max_size=8),
        inner, max_size=3),
    max_leaves=6,
)


def scratch_folder(prefix: str) -> Path:
    """A temporary folder for a fuzz module's files, removed when the test run ends."""
    folder = Path(tempfile.mkdtemp(prefix=prefix))
    atexit.register(shutil.rmtree, folder, ignore_errors=True)
    return folder


_file_numbers = itertools.count()


def fresh_file(folder: Path, name: str, data: bytes) -> Path:
    """``data`` written as ``name`` in a new sub-folder of ``folder`` (no side files)."""
    path = folder / f"f{next(_file_numbers)}" / name
    path.parent.mkdir()
    path.write_bytes(data)
    return path


def key_paths(node: Any, prefix: tuple = ()) -> Iterator[tuple]:
    """Every key path into a TOML tree (tables and lists), leaves and branches."""
    if isinstance(node, dict):
        for k, v in node.items():
            yield (*prefix, k)
            yield from key_paths(v, (*prefix, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield (*prefix, i)
            yield from key_paths(v, (*prefix, i))


def _parent(tree: Any, path: tuple) -> Any:
    node = tree
    for k in path[:-1]:
        node = node[k]
    return node


ACTIONS = st.sampled_from(["replace", "replace", "replace", "delete", "add"])
NEW_KEYS = st.text(min_size=1, max_size=10)


def mutate(tree: dict, data: st.DataObject, values: st.SearchStrategy = TOML_VALUES,
           max_changes: int = 3) -> dict:
    """Apply 1 to ``max_changes`` changes to a copy of ``tree``: replace, delete or add a key."""
    tree = copy.deepcopy(tree)
    for _ in range(data.draw(st.integers(1, max_changes), label="changes")):
        paths = list(key_paths(tree))
        if not paths:
            break
        path = paths[data.draw(st.integers(0, len(paths) - 1), label="path")]
        parent = _parent(tree, path)
        action = data.draw(ACTIONS, label="action")
        if action == "replace":
            parent[path[-1]] = data.draw(values, label="value")
        elif action == "delete":
            del parent[path[-1]]
        elif isinstance(parent, dict):
            parent[data.draw(NEW_KEYS, label="key")] = data.draw(values, label="value")
        else:
            parent.append(data.draw(values, label="value"))
    return tree


def check_error(exc: InputError) -> None:
    """The promise of every loader: a non-empty location and one line of text."""
    assert isinstance(exc, InputError)
    assert exc.where.strip(), f"no location in {exc!r}"
    assert exc.message.strip(), f"no message in {exc!r}"
    assert "\n" not in str(exc) and "\r" not in str(exc), f"more than one line: {exc!r}"


def only_input_errors(load: Callable[[], Any]) -> Any:
    """Call ``load``; an ``InputError`` is checked and gives None, anything else escapes."""
    try:
        out = load()
    except InputError as exc:
        check_error(exc)
        event("refused with one InputError line")
        return None
    event("accepted")
    return out


def assert_finite(obj: Any, path: str = "result", *, allow_inf: frozenset[str] = frozenset(),
                  seen: set[int] | None = None) -> None:
    """Walk dataclasses, mappings, sequences and arrays; no NaN, no infinity.

    ``allow_inf`` names attributes where infinity is a documented value ("never").
    """
    seen = set() if seen is None else seen
    if id(obj) in seen:
        return
    if isinstance(obj, bool | int | str | bytes | Path | dt.date | dt.time | type(None)):
        return
    if isinstance(obj, float):
        name = path.rsplit(".", 1)[-1]
        ok = math.isfinite(obj) or (math.isinf(obj) and obj > 0 and name in allow_inf)
        assert ok, f"{path} is {obj}"
        return
    seen.add(id(obj))
    if isinstance(obj, np.ndarray):
        if obj.dtype.kind in "fc":
            assert np.isfinite(obj).all(), f"{path} holds non-finite numbers"
        return
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        for f in dataclasses.fields(obj):
            assert_finite(getattr(obj, f.name), f"{path}.{f.name}", allow_inf=allow_inf,
                          seen=seen)
    elif isinstance(obj, dict):
        for k, v in obj.items():
            assert_finite(v, f"{path}[{k!r}]", allow_inf=allow_inf, seen=seen)
    elif isinstance(obj, list | tuple):
        for i, v in enumerate(obj):
            assert_finite(v, f"{path}[{i}]", allow_inf=allow_inf, seen=seen)


def head(path: Path, rows: int) -> str:
    """A CSV file's comments, header and first ``rows`` data rows."""
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    first = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    return "".join(lines[: first + 1 + rows])


#: Header names a profile mutation may rename a column to.
PROFILE_HEADER_NAMES = ("time", "speed", "speed_mph", "time_s", "TIME_S", "grade_%", "", "x")
#: Cells that break naive CSV readers.
CELLS = st.one_of(
    NASTY_NUMBERS.map(repr), st.sampled_from([
        "", " ", "nan", "NaN", "inf", "-inf", "Infinity", "1e400", "-1", "0", "x", '"', '"1"',
        "1,2", "#", "\ufeff", "\x00", "é", "1_000", "0x10", "1e", "--1", "2e308", "5e-324"]),
    st.text(max_size=6),
)


@st.composite
def mutated_csv(draw, files: dict[str, str],
                header_names: tuple[str, ...] = PROFILE_HEADER_NAMES) -> bytes:
    """One of ``files`` (name -> CSV text) with 1 to 3 changes, as bytes.

    A change replaces a cell, drops, doubles or cuts a line, renames a header cell to one of
    ``header_names``, adds a column or inserts random bytes; a byte-order mark may lead.
    """
    lines = files[draw(st.sampled_from(sorted(files)))].splitlines()
    for _ in range(draw(st.integers(1, 3))):
        i = draw(st.integers(0, len(lines) - 1))
        action = draw(st.sampled_from(["cell", "cell", "cell", "drop", "double", "cut",
                                       "header", "bytes", "column"]))
        cells = lines[i].split(",")
        if action == "cell":
            cells[draw(st.integers(0, len(cells) - 1))] = draw(CELLS)
            lines[i] = ",".join(cells)
        elif action == "drop":
            del lines[i]
        elif action == "double":
            lines.insert(i, lines[i])
        elif action == "cut":
            lines = lines[: i + 1]
            lines[i] = lines[i][: draw(st.integers(0, len(lines[i])))]
        elif action == "header":
            j = next((k for k, line in enumerate(lines) if not line.startswith("#")), i)
            names = lines[j].split(",")
            names[draw(st.integers(0, len(names) - 1))] = draw(st.sampled_from(header_names))
            lines[j] = ",".join(names)
        elif action == "column":
            lines[i] += "," + draw(CELLS)
        else:
            lines.insert(i, draw(st.binary(max_size=20)).decode("utf-8", "surrogateescape"))
        if not lines:
            break
    text = "\n".join(lines) + draw(st.sampled_from(["\n", "", "\r\n"]))
    raw = text.encode("utf-8", "surrogateescape")
    return draw(st.sampled_from([b"", b"\xef\xbb\xbf"])) + raw
