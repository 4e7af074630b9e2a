"""The ``workbench`` command line (also ``python -m workbench``).

Each command group lives in ``workbench/interfaces/commands/<group>.py`` and exposes
``register(sub)``, which adds its sub-parsers (made with :func:`command`, so each has a
description and an example) and sets ``func`` on them. Building the parser imports no
numerical library: the command modules import Cantera, pandas, pint and the models inside
their handlers, so ``workbench --help`` and ``workbench fuels list`` start fast.

Conventions: ``-`` stands for standard input or output where a command reads or writes a file;
progress goes to standard error only when it is a terminal and ``--quiet`` is not given;
``main`` turns :class:`InputError` into one line on standard error and exit status 2, never a
traceback, and so does a bad option.
"""

from __future__ import annotations

import argparse
import importlib
import json
import math
import sys
from collections.abc import Callable, Iterable, Iterator, Sequence
from typing import Any

from workbench.core.errors import InputError
from workbench.core.text import json_safe

#: Command modules, in the order their groups appear in ``workbench --help``.
COMMAND_MODULES = ("fuels", "nox", "duty", "fleet", "study", "docs")

#: Stands for standard input or output in place of a file name.
STDIO = "-"

_DESCRIPTION = ("Fuel-switch studies for vehicle fleets: fuel sheets, storage, NOx, duty "
                "profiles, and whole studies with cost per km, NPV and an HTML report.")
_EXAMPLE = "workbench demo -o kestrel-bay.html --open"


class _Parser(argparse.ArgumentParser):
    """An argument parser whose usage errors are one line and exit status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(2, f"{self.prog}: error: {message}\n")


class _Formatter(argparse.HelpFormatter):
    """Wraps descriptions to the terminal; keeps an epilog's example lines as written."""

    def _fill_text(self, text: str, width: int, indent: str) -> str:
        if text.startswith("example"):
            return "".join(indent + line for line in text.splitlines(keepends=True))
        return super()._fill_text(text, width, indent)


class _Version(argparse.Action):
    """``--version``: print the installed version (read only when asked) and exit."""

    def __init__(self, option_strings: Sequence[str], dest: str = argparse.SUPPRESS,
                 default: str = argparse.SUPPRESS, help: str | None = None) -> None:
        super().__init__(option_strings, dest=dest, default=default, nargs=0, help=help)

    def __call__(self, parser: argparse.ArgumentParser, namespace: argparse.Namespace,
                 values: object, option_string: str | None = None) -> None:
        import workbench

        print(f"workbench {workbench.__version__}")
        parser.exit(0)


class LazyChoices(Sequence[str]):
    """Choices of an option, loaded from a heavy module only when argparse needs them.

    argparse reads the choices to check a value and to write ``--help``; building the parser
    does not (give the option a ``metavar``), so a command's module can offer the presets of
    a model without importing it.

    Parameters
    ----------
    load : callable
        Returns the choices.
    """

    def __init__(self, load: Callable[[], Iterable[str]]) -> None:
        self._load = load
        self._names: tuple[str, ...] | None = None

    def _all(self) -> tuple[str, ...]:
        if self._names is None:
            self._names = tuple(self._load())
        return self._names

    def __getitem__(self, index: int) -> str:  # type: ignore[override]
        return self._all()[index]

    def __len__(self) -> int:
        return len(self._all())

    def __contains__(self, value: object) -> bool:
        return value in self._all()

    def __iter__(self) -> Iterator[str]:
        return iter(self._all())


def command(sub: argparse._SubParsersAction, name: str, *, help: str, description: str,
            example: str | Sequence[str]) -> argparse.ArgumentParser:
    """Add a sub-command whose ``--help`` has a description and an example.

    Parameters
    ----------
    sub : argparse._SubParsersAction
        Where to add it.
    name : str
        Command name.
    help : str
        One line for the list of commands.
    description : str
        What the command does, shown at the top of its ``--help``.
    example : str or sequence of str
        Example command lines, shown at the end of its ``--help``.

    Returns
    -------
    argparse.ArgumentParser
    """
    examples = [example] if isinstance(example, str) else list(example)
    return sub.add_parser(name, help=help, description=description,
                          epilog="example" + ("s" if len(examples) > 1 else "") + ":\n"
                          + "\n".join(f"  {e}" for e in examples),
                          formatter_class=_Formatter)


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
    """Build the full ``workbench`` argument parser (imports no numerical library).

    Returns
    -------
    argparse.ArgumentParser
        The parser with every command group registered.
    """
    parser = _Parser(prog="workbench", description=_DESCRIPTION,
                     epilog=f"example:\n  {_EXAMPLE}\n\n"
                            "Run 'workbench COMMAND --help' for a command's options.",
                     formatter_class=_Formatter)
    parser.add_argument("--version", action=_Version, help="print the version and exit")
    sub = parser.add_subparsers(dest="group", required=True, parser_class=_Parser,
                                metavar="COMMAND")
    for name in COMMAND_MODULES:
        importlib.import_module(f"workbench.interfaces.commands.{name}").register(sub)
    return parser


def add_quiet(p: argparse.ArgumentParser) -> None:
    """Add ``--quiet`` (no progress on standard error, no "written" notes)."""
    p.add_argument("-q", "--quiet", action="store_true",
                   help="no progress on standard error (also off when it is not a terminal)")


def progress(args: argparse.Namespace) -> Callable[[str], None] | None:
    """The progress callback of a long run: lines on a terminal's standard error, or None.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed options (``quiet``).

    Returns
    -------
    callable or None
        None when ``--quiet`` is given or standard error is not a terminal (piped, a file).
    """
    if getattr(args, "quiet", False) or not sys.stderr.isatty():
        return None

    def say(text: str) -> None:
        print(f"workbench: {text}", file=sys.stderr, flush=True)

    return say


def print_vehicles(done: int, total: int) -> None:
    """Fleet progress on standard error, ``vehicles 7/13`` rewritten in place: the
    ``(done, total)`` callback of ``workbench.study.fleet.Progress``."""
    print(f"\rvehicles {done}/{total}", end="\n" if done == total else "", file=sys.stderr,
          flush=True)


def vehicle_progress(args: argparse.Namespace) -> Callable[[int, int], None] | None:
    """:func:`print_vehicles` where :func:`progress` prints (a terminal, no ``--quiet``), else
    None: the vehicles of a study's fleet runs as they finish."""
    return print_vehicles if progress(args) is not None else None


def read_bytes_arg(ref: str, option: str) -> bytes:
    """The bytes of standard input, for a file argument given as ``-``.

    Parameters
    ----------
    ref : str
        The argument (``-``).
    option : str
        How the user gave it, for the error message.

    Returns
    -------
    bytes

    Raises
    ------
    InputError
        Standard input is a terminal, or holds nothing but white space.
    """
    hint = "pipe the file in (workbench ... - < file)"
    if sys.stdin is None or sys.stdin.isatty():
        raise InputError(option, f"'{ref}' reads standard input: {hint}")
    stream = getattr(sys.stdin, "buffer", None)  # a text stream in tests has no bytes below
    data = stream.read() if stream is not None else sys.stdin.read().encode("utf-8")
    if not data.removeprefix(b"\xef\xbb\xbf").strip():
        raise InputError(option, f"'{ref}' read nothing from standard input: {hint}")
    return data


def read_text_arg(ref: str, option: str) -> str:
    """The text of standard input (UTF-8, a byte-order mark dropped), for ``-``.

    Parameters
    ----------
    ref, option : str
        As :func:`read_bytes_arg`.

    Returns
    -------
    str

    Raises
    ------
    InputError
        As :func:`read_bytes_arg`, and when the bytes are not UTF-8.
    """
    try:
        return read_bytes_arg(ref, option).decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(option, f"'{ref}': standard input is not UTF-8 text; save the file "
                                 "as UTF-8") from None


def open_in_browser(path: Any) -> None:
    """Open a written file in the user's web browser (``--open``)."""
    import webbrowser
    from pathlib import Path

    webbrowser.open(Path(path).resolve().as_uri())


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
