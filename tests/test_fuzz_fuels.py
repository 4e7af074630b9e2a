"""Fuzz the fuel-file loader: mutated library files and random bytes.

Every mutation of a shipped fuel file (a species mixture, a blend, a pseudo-component) either
gives a fuel whose numbers are all finite, or ends in one ``InputError`` naming the file and
key; random bytes and a byte-order mark are handled the same way. Common practice, no source.
"""

from __future__ import annotations

import itertools
import tomllib

import pytest
import tomli_w
from fuzzing import assert_finite, check_error, mutate, only_input_errors, scratch_folder
from hypothesis import given
from hypothesis import strategies as st

from workbench.core.errors import InputError
from workbench.core.fuels import LIBRARY, fuel_from_dict, load_fuel

pytestmark = pytest.mark.timeout(60)

FILES = {name: tomllib.loads((LIBRARY / f"{name}.toml").read_text(encoding="utf-8"))
         for name in ("natural-gas", "lpg", "diesel")}
TMP = scratch_folder("workbench-fuzz-fuels-")
_names = itertools.count()


@given(st.sampled_from(sorted(FILES)), st.data())
def test_mutated_fuel_files_load_or_say_where(name, data):
    tree = mutate(FILES[name], data)
    fuel = only_input_errors(lambda: fuel_from_dict(tree, fuel_id=name, where=f"{name}.toml"))
    if fuel is not None:
        assert_finite(fuel, name)
        again = fuel_from_dict(tomllib.loads(tomli_w.dumps(tree)), fuel_id=name,
                               where=f"{name}.toml")
        assert again == fuel


@given(st.binary(max_size=300) | st.text(max_size=300).map(str.encode))
def test_random_bytes_are_refused_in_one_line(raw):
    path = TMP / f"random-{next(_names)}.toml"  # a new name each time: loads are memoised
    path.write_bytes(raw)
    fuel = only_input_errors(lambda: load_fuel(path))
    if fuel is not None:
        assert_finite(fuel, "fuel")


@given(st.sampled_from(sorted(FILES)))
def test_a_byte_order_mark_is_read(name):
    path = TMP / f"bom-{next(_names)}" / f"{name}.toml"  # the stem names the fuel
    path.parent.mkdir()
    path.write_bytes(b"\xef\xbb\xbf" + (LIBRARY / f"{name}.toml").read_bytes())
    assert load_fuel(path).composition == load_fuel(name).composition


@given(st.sampled_from(["a\x00b.toml", "x" * 300 + ".toml", "/" + "d/" * 3000 + "f.toml",
                        "é" * 200 + ".toml"]))
def test_impossible_file_names_are_one_line(ref):
    with pytest.raises(InputError) as exc:
        load_fuel(ref)
    check_error(exc.value)
