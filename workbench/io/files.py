"""Writing output files whole or not at all, and leaving nothing behind when killed.

Every file the workbench writes (reports, study files, fuel files, CSV tables, uploads) goes
through :func:`write_text_atomic`. Where the system allows it (Linux, on ext4, XFS, btrfs,
tmpfs …) the text is written into an *unnamed* file in the target folder (``O_TMPFILE``),
which the kernel deletes by itself if the process dies; only when it is complete and on disk is
it linked under a temporary name and renamed over the target. Elsewhere the text goes to a
temporary file named ``.<target>.<pid>.<random>.part``, renamed over the target when complete.
Either way a failure leaves no half-written file and an older file untouched; the only window
in which a kill leaves a named temporary is that link-and-rename (or the whole write, without
``O_TMPFILE``), and the next write to the same target removes the temporaries of its pattern
whose process is gone.
"""

from __future__ import annotations

import errno
import os
import re
import secrets
from pathlib import Path

from workbench.core.errors import InputError

#: Mode of written files: readable by others.
FILE_MODE = 0o644
#: Whether to try an unnamed temporary file first (the system must offer ``O_TMPFILE``).
USE_UNNAMED = hasattr(os, "O_TMPFILE")
_PART = re.compile(r"\.(?P<name>.+)\.(?P<pid>\d+)\.[0-9a-f]{16}\.part")
# Errors of open(O_TMPFILE) that mean "not offered here": fall back to a named temporary.
_NO_UNNAMED = {errno.EOPNOTSUPP, errno.EISDIR, errno.EINVAL, errno.ENOENT}


def check_target(path: Path, *, suffix: str, option: str) -> None:
    """Check that a file can be written at ``path`` before any work is done.

    Parameters
    ----------
    path : pathlib.Path
        The file to write.
    suffix : str
        Required ending, e.g. ``".html"``.
    option : str
        Option or field that gave the path, named in errors.

    Raises
    ------
    InputError
        Wrong ending, missing folder, or a folder given as the file.
    """
    if "\x00" in str(path):
        raise InputError(option, "the file name holds a null byte; give a plain file name")
    if path.suffix.lower() != suffix:
        raise InputError(option, f"the file name must end in {suffix}, got {path.name}")
    if not path.parent.is_dir():
        raise InputError(option, f"folder {path.parent} does not exist; create it first")
    if path.is_dir():
        raise InputError(option, f"{path} is a folder; give a file name ending in {suffix}")


def write_text_atomic(path: str | os.PathLike[str], text: str, *, suffix: str,
                      option: str) -> Path:
    """Write UTF-8 text to a file whole or not at all.

    Parameters
    ----------
    path : str or os.PathLike
        Destination.
    text : str
        Contents, written as UTF-8 exactly (no newline translation).
    suffix : str
        Required file-name ending (``".html"``, ``".toml"``, ``".csv"``).
    option : str
        Option or field that gave the path, named in errors.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    InputError
        A path :func:`check_target` refuses, or a folder that cannot be written.
    """
    target = Path(path)
    check_target(target, suffix=suffix, option=option)
    data = text.encode("utf-8")
    try:
        sweep_stale_temporaries(target)
        if not (USE_UNNAMED and _write_unnamed(target, data)):
            _write_named(target, data)
        _sync_folder(target.parent)
    except OSError as exc:
        raise InputError(option, f"cannot write {target} ({exc.strerror or exc}); choose a "
                         "writable folder") from None
    return target


def temporary_name(target: Path) -> Path:
    """A fresh temporary name beside ``target``: ``.<name>.<pid>.<16 hex digits>.part``."""
    return target.with_name(f".{target.name}.{os.getpid()}.{secrets.token_hex(8)}.part")


def sweep_stale_temporaries(target: Path) -> list[Path]:
    """Remove temporaries of ``target`` left by writers that were killed.

    Parameters
    ----------
    target : pathlib.Path
        The file about to be written.

    Returns
    -------
    list of pathlib.Path
        The temporaries removed: those of :func:`temporary_name`'s pattern for this target
        whose process no longer runs (a running writer's temporaries are left alone).
    """
    removed = []
    for entry in target.parent.glob(f".{_glob_escape(target.name)}.*.part"):
        m = _PART.fullmatch(entry.name)
        if m is None or m.group("name") != target.name:
            continue
        pid = int(m.group("pid"))
        if pid == os.getpid() or _running(pid):
            continue
        try:
            entry.unlink()
        except FileNotFoundError:  # another writer swept it first
            continue
        removed.append(entry)
    return removed


def _glob_escape(name: str) -> str:
    return re.sub(r"([*?\[])", r"[\1]", name)


def _running(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # someone else's process: running
        return True
    except OverflowError:
        return False
    return True


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        view = view[os.write(fd, view):]
    os.fsync(fd)


def _write_unnamed(target: Path, data: bytes) -> bool:
    """Write through an unnamed file, link it and rename it; False where not offered."""
    try:
        fd = os.open(target.parent, os.O_TMPFILE | os.O_WRONLY | os.O_CLOEXEC, FILE_MODE)
    except OSError as exc:
        if exc.errno in _NO_UNNAMED:
            return False
        raise
    temp = temporary_name(target)
    try:
        _write_all(fd, data)
        os.fchmod(fd, FILE_MODE)  # the umask applies at open
        try:
            os.link(f"/proc/self/fd/{fd}", temp, follow_symlinks=True)  # linkat, AT_SYMLINK_FOLLOW
        except OSError as exc:
            if exc.errno in (errno.ENOENT, errno.EXDEV, errno.EPERM):  # no /proc: fall back
                return False
            raise
    finally:
        os.close(fd)
    _rename_over(temp, target)
    return True


def _write_named(target: Path, data: bytes) -> None:
    temp = temporary_name(target)
    fd = os.open(temp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, FILE_MODE)
    try:
        try:
            os.fchmod(fd, FILE_MODE)
            _write_all(fd, data)
        finally:
            os.close(fd)
    except BaseException:
        temp.unlink(missing_ok=True)
        raise
    _rename_over(temp, target)


def _rename_over(temp: Path, target: Path) -> None:
    try:
        os.replace(temp, target)
    except BaseException:
        temp.unlink(missing_ok=True)
        raise


def _sync_folder(folder: Path) -> None:
    """Put the rename on disk too (where a folder can be opened and synced)."""
    try:
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
