"""The ``workbench`` command line.

Each command group lives in ``workbench/commands/<group>.py`` and exposes ``register(sub)``,
which adds its sub-parser and sets ``func`` on it. ``main`` turns :class:`InputError` into one
line on standard error and exit status 2, never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import json
import math
import sys
from collections.abc import Sequence
from typing import Any

from workbench.core.errors import InputError
from workbench.core.text import json_safe

#: Command modules, in the order their groups appear in ``workbench --help``.
COMMAND_MODULES = ("fuels", "nox", "duty", "fleet", "study", "docs")


class _Parser(argparse.ArgumentParser):
    """An argument parser whose usage errors are one line and exit status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(2, f"{self.prog}: error: {message}\n")


def finite_float(text: str) -> float:
    """Argument type of every numeric option: a finite number (no NaN, no infinity).

    Parameters
    ----------
    text : str
        The option's value as typed.

    Returns
    -------
    float

    Raises
    ------
    argparse.ArgumentTypeError
        Not a number, or NaN or infinite; argparse prints it as one usage line (exit 2).
    """
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a number, got {text[:40]!r}") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"must be a finite number, got {text[:40]!r}")
    return value


def build_parser() -> argparse.ArgumentParser:
    """Build the full ``workbench`` argument parser.

    Returns
    -------
    argparse.ArgumentParser
        The parser with every command group registered.
    """
    parser = _Parser(prog="workbench", description="Fuel-switch studies for vehicle fleets.")
    sub = parser.add_subparsers(dest="group", required=True, parser_class=_Parser)
    for name in COMMAND_MODULES:
        importlib.import_module(f"workbench.interfaces.commands.{name}").register(sub)
    return parser


def add_fuels_option(p: argparse.ArgumentParser) -> None:
    """Add ``--fuels DIR`` to a command that reads fuels: the user's folders, searched first.

    Parameters
    ----------
    p : argparse.ArgumentParser
        The command's parser.
    """
    p.add_argument("--fuels", dest="fuel_folders", action="append", default=[], metavar="DIR",
                   help="folder of your own fuel .toml files, searched for fuel ids before "
                        "WORKBENCH_FUELS and the shipped library (repeatable)")


def _call(args: argparse.Namespace) -> None:
    """Run the command, with its ``--fuels`` folders searched for the length of the call."""
    folders = getattr(args, "fuel_folders", None)
    if not folders:
        args.func(args)
        return
    from workbench.core.fuels import use_fuel_folders

    previous = use_fuel_folders(folders)
    try:
        args.func(args)
    finally:
        use_fuel_folders(previous)


def print_json(obj: Any) -> None:
    """Print ``obj`` as indented JSON on standard output (NaN becomes null)."""
    print(json.dumps(json_safe(obj), indent=2, ensure_ascii=False))


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments without the program name; ``sys.argv[1:]`` when omitted.

    Returns
    -------
    int
        Exit status: 0 on success, 2 on a bad input.
    """
    args = build_parser().parse_args(argv)
    try:
        _call(args)
    except InputError as exc:
        print(f"workbench: error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into `head`
        return 0
    return 0


if __name__ == "__main__":
    sys.exit(main())
