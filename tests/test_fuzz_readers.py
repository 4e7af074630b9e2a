"""Fuzz the readers of profiles (CSV), efficiency maps (CSV) and vehicles (TOML).

Each shipped file (a profile cut to its first rows) is mutated — a cell replaced by a nasty
token, a line dropped, doubled or cut, bytes inserted — or replaced by random bytes; the reader
either returns an object whose arrays are all finite, or ends in one ``InputError`` naming the
file (and row). Valid vehicle mutations round-trip through TOML. Common practice, no source.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
import tomli_w
from fuzzing import (
    NASTY_NUMBERS,
    TOML_VALUES,
    assert_finite,
    fresh_file,
    head,
    mutate,
    mutated_csv,
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


PROFILES = {p.stem: head(p, 40) for p in sorted((DATA / "profiles").glob("*.csv"))}
MAPS = {p.stem: p.read_text(encoding="utf-8") for p in sorted((DATA / "maps").glob("*.csv"))}
VEHICLES = {p.stem: tomllib.loads(p.read_text(encoding="utf-8"))
            for p in sorted((DATA / "vehicles").glob("*.toml"))}


def _file(suffix: str, data: bytes) -> Path:
    return fresh_file(TMP, f"fuzz{suffix}", data)


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
