"""Writing output files whole or not at all.

Every file the workbench writes (reports, study files, fuel files, CSV tables, uploads) goes
through :func:`write_text_atomic`: the text lands in a temporary file in the target folder and is
renamed over the target only once it is complete, so a failure leaves no half-written file and
an older file untouched.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from workbench.core.errors import InputError

#: Mode of written files: readable by others (a temporary file is created private).
FILE_MODE = 0o644


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
    if path.suffix.lower() != suffix:
        raise InputError(option, f"the file name must end in {suffix}, got {path.name}")
    if not path.parent.is_dir():
        raise InputError(option, f"folder {path.parent} does not exist; create it first")
    if path.is_dir():
        raise InputError(option, f"{path} is a folder; give a file name ending in {suffix}")


def write_text_atomic(path: str | os.PathLike[str], text: str, *, suffix: str,
                      option: str) -> Path:
    """Write UTF-8 text to a file through a temporary file in the same folder.

    Parameters
    ----------
    path : str or os.PathLike
        Destination.
    text : str
        Contents.
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
    tmp_name = None
    try:
        with tempfile.NamedTemporaryFile("w", encoding="utf-8", newline="", dir=target.parent,
                                         prefix=f".{target.name}.", suffix=".tmp",
                                         delete=False) as tmp:
            tmp_name = tmp.name
            tmp.write(text)
            tmp.flush()
            os.fsync(tmp.fileno())
        os.chmod(tmp_name, FILE_MODE)
        os.replace(tmp_name, target)
    except OSError as exc:
        if tmp_name is not None and os.path.exists(tmp_name):
            os.unlink(tmp_name)
        raise InputError(option, f"cannot write {target} ({exc.strerror}); choose a writable "
                         "folder") from None
    return target
