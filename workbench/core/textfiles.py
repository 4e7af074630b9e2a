"""Reading the TOML files users write, and checking the file names they type.

Every TOML reader of the package (fuel files, study files, vehicle files, side files) parses
the file's bytes with :func:`parse_toml`: UTF-8 with or without a byte-order mark (a Notepad
save writes one), and anything that goes wrong — bytes that are not UTF-8, broken TOML, a file
far too large or nested far too deep — is one :class:`~workbench.core.errors.InputError`
naming the file. :func:`check_file_name` refuses
file names no operating system accepts (a null byte, a name longer than the system allows)
before they reach it.
"""

from __future__ import annotations

import tomllib
from typing import Any

from workbench.core.errors import InputError

#: Largest TOML file read [bytes]; study, fuel and vehicle files are a few kB.
MAX_TOML_BYTES = 10_000_000
#: Longest file name typed in a study or on the command line [characters] (Linux PATH_MAX).
MAX_PATH_LENGTH = 4096
#: Longest single folder or file name in it [bytes] (NAME_MAX of common file systems).
MAX_NAME_BYTES = 255


def _label(text: str) -> str:
    return text if len(text) <= 80 else text[:77] + "..."


def check_file_name(raw: object, where: str, *, what: str = "a file") -> str:
    """Check a file name a user typed, before it is handed to the operating system.

    Parameters
    ----------
    raw : object
        The value as read (a study-file value, a command-line argument).
    where : str
        Key path or option named in the error.
    what : str
        What the file is, for the error ("a profile .csv file").

    Returns
    -------
    str
        The name, unchanged.

    Raises
    ------
    InputError
        Not a non-empty text, a null byte, or a name longer than the system allows.
    """
    if not isinstance(raw, str) or not raw.strip():
        raise InputError(where, f"must name {what}, got {_label(repr(raw))}")
    if "\x00" in raw:
        raise InputError(where, f"{_label(repr(raw))} holds a null byte; name {what}")
    if len(raw) > MAX_PATH_LENGTH:
        raise InputError(where, f"the file name is {len(raw)} characters long; at most "
                         f"{MAX_PATH_LENGTH}")
    for part in raw.replace("\\", "/").split("/"):
        if len(part.encode("utf-8", "surrogateescape")) > MAX_NAME_BYTES:
            raise InputError(where, f"{_label(part)!r} is longer than {MAX_NAME_BYTES} bytes, "
                             "more than a file system allows in one name")
    return raw


def parse_toml(data: bytes | str, name: str) -> dict[str, Any]:
    """Parse the contents of a TOML file a user wrote.

    Parameters
    ----------
    data : bytes or str
        The file's bytes (UTF-8, with or without a byte-order mark) or its decoded text.
    name : str
        What errors call the file.

    Returns
    -------
    dict
        The parsed tables.

    Raises
    ------
    InputError
        More than :data:`MAX_TOML_BYTES`, bytes that are not UTF-8 (the line is named), TOML
        syntax errors, or nesting too deep to parse.
    """
    label = _label(name)
    if len(data) > MAX_TOML_BYTES:
        raise InputError(label, f"is {len(data) / 1e6:.0f} MB; a TOML input file is at most "
                         f"{MAX_TOML_BYTES / 1e6:.0f} MB")
    if isinstance(data, bytes):
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            line = data[: exc.start].count(b"\n") + 1
            raise InputError(f"{label} line {line}", "is not UTF-8 text; save the file as "
                             "UTF-8") from None
    else:
        text = data.removeprefix("\ufeff")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(label, f"not valid TOML ({exc}); fix the syntax") from None
    except RecursionError:
        raise InputError(label, "is nested too deeply to be a workbench file") from None
