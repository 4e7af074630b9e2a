"""Output files are written whole or not at all."""

from __future__ import annotations

import os
import stat

import pytest

from workbench.core.errors import InputError
from workbench.io.files import write_text_atomic


def test_writes_the_text_readable_by_others(tmp_path):
    path = write_text_atomic(tmp_path / "a.csv", "x,y\n1,2\n", suffix=".csv", option="--csv")
    assert path.read_text(encoding="utf-8") == "x,y\n1,2\n"
    assert stat.S_IMODE(path.stat().st_mode) == 0o644  # a report or table is for sharing
    assert [p.name for p in tmp_path.iterdir()] == ["a.csv"]


def test_a_failed_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    target = tmp_path / "s.toml"
    target.write_text("old", encoding="utf-8")

    def fail(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", fail)
    with pytest.raises(InputError, match="No space left") as err:
        write_text_atomic(target, "new", suffix=".toml", option="path")
    assert err.value.where == "path" and "\n" not in str(err.value)
    assert target.read_text(encoding="utf-8") == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["s.toml"]


@pytest.mark.parametrize(("name", "words"), [
    ("a.txt", r"must end in \.toml"),
    ("missing/a.toml", "does not exist"),
])
def test_bad_targets_are_refused_before_writing(tmp_path, name, words):
    with pytest.raises(InputError, match=words):
        write_text_atomic(tmp_path / name, "x", suffix=".toml", option="--write")
    assert list(tmp_path.iterdir()) == []


def test_a_folder_is_not_a_file(tmp_path):
    (tmp_path / "d.toml").mkdir()
    with pytest.raises(InputError, match="is a folder"):
        write_text_atomic(tmp_path / "d.toml", "x", suffix=".toml", option="path")
