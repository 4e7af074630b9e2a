"""Fuzz the readers of profiles (CSV), efficiency maps (CSV) and vehicles (TOML).

Each shipped file (a profile cut to its first rows) is mutated — a cell replaced by a nasty
token, a line dropped, doubled or cut, bytes inserted — or replaced by random bytes; the reader
either returns an object whose arrays are all finite, or ends in one ``InputError`` naming the
file (and row). Valid vehicle mutations round-trip through TOML. Common practice, no source.
"""

from __future__ import annotations

import itertools
import tomllib
from pathlib import Path

import pytest
import tomli_w
from fuzzing import (
    NASTY_NUMBERS,
    TOML_VALUES,
    assert_finite,
    mutate,
    only_input_errors,
    scratch_folder,
)
from hypothesis import given
from hypothesis import strategies as st

from workbench.core.paths import DATA
from workbench.io.maps import read_map
from workbench.io.profiles import read_profile
from workbench.io.vehicles import read_vehicle

pytestmark = pytest.mark.timeout(60)

TMP = scratch_folder("workbench-fuzz-readers-")
_names = itertools.count()


def _head(path: Path, rows: int) -> str:
    """The file's comments, header and first ``rows`` data rows."""
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    first = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    return "".join(lines[: first + 1 + rows])


PROFILES = {p.stem: _head(p, 40) for p in sorted((DATA / "profiles").glob("*.csv"))}
MAPS = {p.stem: p.read_text(encoding="utf-8") for p in sorted((DATA / "maps").glob("*.csv"))}
VEHICLES = {p.stem: tomllib.loads(p.read_text(encoding="utf-8"))
            for p in sorted((DATA / "vehicles").glob("*.toml"))}

CELLS = st.one_of(
    NASTY_NUMBERS.map(repr), st.sampled_from([
        "", " ", "nan", "NaN", "inf", "-inf", "Infinity", "1e400", "-1", "0", "x", '"', '"1"',
        "1,2", "#", "\ufeff", "\x00", "é", "1_000", "0x10", "1e", "--1", "2e308", "5e-324"]),
    st.text(max_size=6),
)


@st.composite
def mutated_csv(draw, files: dict[str, str]) -> bytes:
    """A shipped CSV with 1 to 3 changes, as bytes."""
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
            head = lines[j].split(",")
            head[draw(st.integers(0, len(head) - 1))] = draw(st.sampled_from(
                ["time", "speed", "speed_mph", "time_s", "TIME_S", "grade_%", "", "x"]))
            lines[j] = ",".join(head)
        elif action == "column":
            lines[i] += "," + draw(CELLS)
        else:
            lines.insert(i, draw(st.binary(max_size=20)).decode("utf-8", "surrogateescape"))
        if not lines:
            break
    text = "\n".join(lines) + draw(st.sampled_from(["\n", "", "\r\n"]))
    raw = text.encode("utf-8", "surrogateescape")
    return draw(st.sampled_from([b"", b"\xef\xbb\xbf"])) + raw


def _file(suffix: str, data: bytes) -> Path:
    path = TMP / f"f{next(_names)}" / f"fuzz{suffix}"
    path.parent.mkdir()
    path.write_bytes(data)
    return path


def _check(obj) -> None:
    if obj is not None:
        assert_finite(obj, type(obj).__name__)


@given(mutated_csv(PROFILES))
def test_profiles_load_or_say_where(data):
    _check(only_input_errors(lambda: read_profile(_file(".csv", data))))


@given(mutated_csv(MAPS))
def test_maps_load_or_say_where(data):
    _check(only_input_errors(lambda: read_map(_file(".csv", data))))


@given(st.binary(max_size=300), st.sampled_from([read_profile, read_map]))
def test_csv_random_bytes(data, reader):
    _check(only_input_errors(lambda: reader(_file(".csv", data))))


@given(st.sampled_from(sorted(VEHICLES)), st.data())
def test_vehicles_load_or_say_where(name, data):
    tree = mutate(VEHICLES[name], data, TOML_VALUES | NASTY_NUMBERS)
    raw = tomli_w.dumps(tree).encode("utf-8")
    vehicle = only_input_errors(lambda: read_vehicle(_file(".toml", raw)))
    _check(vehicle)
    if vehicle is not None:  # the same text read again gives the same vehicle
        assert read_vehicle(_file(".toml", b"\xef\xbb\xbf" + raw)) == vehicle


@given(st.binary(max_size=300))
def test_vehicle_random_bytes(data):
    _check(only_input_errors(lambda: read_vehicle(_file(".toml", data))))


@given(st.sampled_from(sorted(PROFILES)), st.sampled_from(["\n", "\r\n"]))
def test_a_profile_with_a_byte_order_mark_reads_the_same(name, eol):
    text = PROFILES[name]
    plain = read_profile(_file(".csv", text.encode("utf-8")))
    marked = read_profile(_file(".csv", b"\xef\xbb\xbf" + text.replace("\n", eol).encode()))
    assert (marked.time == plain.time).all() and (marked.speed == plain.speed).all()


@given(st.sampled_from(sorted(MAPS)))
def test_a_map_with_a_byte_order_mark_reads_the_same(name):
    plain = read_map(_file(".csv", MAPS[name].encode("utf-8")))
    marked = read_map(_file(".csv", b"\xef\xbb\xbf" + MAPS[name].encode("utf-8")))
    assert (marked.efficiency == plain.efficiency).all()
