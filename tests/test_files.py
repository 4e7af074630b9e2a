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


# --- a hard kill during a write ------------------------------------------------------------
# The child writes a new version of the target and stops, as if killed, at the worst moment
# our code can be interrupted by a signal: with all the data written, just before it is made
# durable (os.fsync) and given a name. It says so on stdout and waits for the SIGKILL.
_CHILD = """
import os, sys, time
import workbench.io.files as files
files.USE_UNNAMED = {unnamed}
def stall(fd):
    print("writing", flush=True)
    time.sleep(60)
os.fsync = stall
files.write_text_atomic(sys.argv[1], "new " * 100_000, suffix=".toml", option="path")
"""


def _kill_mid_write(target, *, unnamed):
    import signal
    import subprocess
    import sys

    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    child = subprocess.Popen([sys.executable, "-c", _CHILD.format(unnamed=unnamed), str(target)],
                             stdout=subprocess.PIPE, text=True, env=env)
    try:
        assert child.stdout.readline() == "writing\n"
    finally:
        child.send_signal(signal.SIGKILL)
        child.wait(timeout=30)
    assert child.returncode == -signal.SIGKILL


@pytest.mark.skipif(not hasattr(os, "O_TMPFILE"), reason="O_TMPFILE is Linux only")
def test_a_kill_mid_write_leaves_nothing_and_the_old_file(tmp_path):
    target = tmp_path / "s.toml"
    target.write_text("old", encoding="utf-8")
    _kill_mid_write(target, unnamed=True)
    assert [p.name for p in tmp_path.iterdir()] == ["s.toml"]  # the unnamed file died with it
    assert target.read_text(encoding="utf-8") == "old"


def test_without_unnamed_files_the_next_write_sweeps_what_a_kill_left(tmp_path):
    target = tmp_path / "s.toml"
    target.write_text("old", encoding="utf-8")
    (tmp_path / ".other.toml.1.0123456789abcdef.part").write_text("not ours to sweep")
    _kill_mid_write(target, unnamed=False)
    left = sorted(p.name for p in tmp_path.iterdir())
    assert len(left) == 3 and left[1].startswith(".s.toml.") and left[1].endswith(".part")
    assert target.read_text(encoding="utf-8") == "old"
    write_text_atomic(target, "newer", suffix=".toml", option="path")
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        ".other.toml.1.0123456789abcdef.part", "s.toml"]
    assert target.read_text(encoding="utf-8") == "newer"


def test_a_running_writers_temporary_is_left_alone(tmp_path):
    target = tmp_path / "s.toml"
    mine = tmp_path / f".s.toml.{os.getppid()}.0123456789abcdef.part"  # our parent: running
    mine.write_text("in progress")
    write_text_atomic(target, "x", suffix=".toml", option="path")
    assert mine.exists()
