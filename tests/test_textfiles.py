"""Reading users' TOML files and checking typed file names (workbench.core.textfiles)."""

from __future__ import annotations

import pytest

from workbench.core.errors import InputError
from workbench.core.textfiles import MAX_NAME_BYTES, check_file_name, parse_toml


def test_a_byte_order_mark_is_read():
    # UTF-8 BOM is EF BB BF (Unicode Standard, section 23.8); Notepad writes one.
    assert parse_toml(b"\xef\xbb\xbfx = 1\n", "a.toml") == {"x": 1}
    assert parse_toml("\ufeffx = 1\n", "a.toml") == {"x": 1}


def test_bytes_that_are_not_utf8_name_the_line():
    raw = "x = 1\ny = 'Café'\n".encode("latin-1")  # é is E9 in Latin-1
    with pytest.raises(InputError, match="not UTF-8") as exc:
        parse_toml(raw, "a.toml")
    assert exc.value.where == "a.toml line 2"


@pytest.mark.parametrize(("text", "words"), [
    ("x = ", "not valid TOML"),
    ("a = " + "[" * 50_000 + "]" * 50_000, "nested too deeply"),  # tomllib recurses per level
])
def test_broken_toml_is_one_line(text, words):
    with pytest.raises(InputError, match=words) as exc:
        parse_toml(text.encode("utf-8"), "a.toml")
    assert "\n" not in str(exc.value) and exc.value.where == "a.toml"


@pytest.mark.parametrize(("raw", "words"), [
    ("a\x00b.csv", "null byte"),
    ("x" * (MAX_NAME_BYTES + 1), "longer than 255 bytes"),  # NAME_MAX of ext4, from memory
    ("é" * 128, "longer than 255 bytes"),  # 2 bytes each in UTF-8: 256 bytes
    ("d/" * 2100, "characters long"),  # PATH_MAX 4096 on Linux, from memory
    (["a.csv"], "must name"),
    ("", "must name"),
])
def test_impossible_file_names(raw, words):
    with pytest.raises(InputError, match=words) as exc:
        check_file_name(raw, "classes[0].profile")
    assert exc.value.where == "classes[0].profile"
    assert len(str(exc.value)) < 300  # the name is cut in the message
