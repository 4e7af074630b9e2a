"""Fuzz the study-file loader: mutated demo studies and random bytes.

Checks (the promise of ``workbench.core.errors``): every mutation of the shipped demo study
either loads or ends in one ``InputError`` naming a key path, in one line; no NaN or infinity
reaches the checked inputs (``life`` and ``replacement_interval`` may be infinite: "never");
a mutation that loads survives a TOML round trip unchanged. Common practice, no source.
"""

from __future__ import annotations

import tomllib

import pytest
from fuzzing import assert_finite, check_error, mutate, only_input_errors, scratch_folder
from hypothesis import given
from hypothesis import strategies as st

from workbench.core.errors import InputError
from workbench.study.studyfile import DEMO_STUDY, Study, read_study

DEMO = tomllib.loads(DEMO_STUDY.read_text(encoding="utf-8"))
DEMO["candidates"][0]["conversion"] = "bi-fuel-si"  # a key the demo leaves to its default
Study(DEMO, base_dir=DEMO_STUDY.parent)  # warm the fuel sheets before any deadline runs
NEVER = frozenset({"life", "replacement_interval"})
TMP = scratch_folder("workbench-fuzz-study-")

pytestmark = pytest.mark.timeout(60)


def _load(data: dict) -> Study | None:
    return only_input_errors(lambda: Study(data, where="fuzz.toml", base_dir=DEMO_STUDY.parent))


@given(st.data())
def test_mutated_studies_load_or_say_where(data):
    study = _load(mutate(DEMO, data))
    if study is not None:
        assert_finite(study.inputs, "inputs", allow_inf=NEVER)
        again = Study(tomllib.loads(study.to_toml()), base_dir=DEMO_STUDY.parent)
        assert again == study
        assert again.inputs == study.inputs


@given(st.binary(max_size=400) | st.text(max_size=400).map(str.encode))
def test_random_bytes_are_refused_in_one_line(raw):
    path = TMP / "random.toml"
    path.write_bytes(raw)
    with pytest.raises(InputError) as exc:
        read_study(path)
    check_error(exc.value)


@given(st.sampled_from(["\ufeff", ""]), st.sampled_from(["\n", "\r\n"]))
def test_byte_order_marks_and_line_ends_are_read(bom, eol):
    path = TMP / "demo-copy.toml"
    text = DEMO_STUDY.read_text(encoding="utf-8").replace("\n", eol)
    path.write_bytes((bom + text).encode("utf-8"))
    # relative names resolve from the copy's folder, the shipped ones by name: all shipped
    assert read_study(path) == read_study(DEMO_STUDY)
