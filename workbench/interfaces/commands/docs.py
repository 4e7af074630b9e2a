"""``workbench docs`` and ``workbench notebooks``: what the package ships besides its code.

The pages are package data (``workbench/data/docs``, which the checkout's top-level ``docs/``
holds, and the fuel-file format ``workbench/data/fuels/README.md``), so ``--help`` texts can
point at them in an installed copy without a checkout; ``workbench notebooks DIR`` copies the
shipped notebooks (``workbench/data/notebooks``, the checkout's ``notebooks/``) out to open them.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from workbench.core.errors import InputError
from workbench.core.paths import DATA

#: Folder of the shipped documentation pages.
DOCS = DATA / "docs"
#: Folder of the shipped notebooks.
NOTEBOOKS = DATA / "notebooks"


def pages() -> dict[str, Path]:
    """Shipped documentation pages by topic (file stem), with ``fuels`` for the fuel format.

    Returns
    -------
    dict of str to pathlib.Path
    """
    from workbench.core.fuels import LIBRARY

    found = {p.stem: p for p in sorted(DOCS.glob("*.md"))}
    found["fuels"] = LIBRARY / "README.md"
    return dict(sorted(found.items()))


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``docs`` command to the top-level parser."""
    p = sub.add_parser(
        "docs", help="print a documentation page (study file, fuel files, glossary, ...)",
        description="Print one of the documentation pages shipped with the workbench, as "
        "Markdown; without a topic, list them. Example: workbench docs study-file",
    )
    p.add_argument("topic", nargs="?", help="page to print (e.g. study-file, fuels, glossary)")
    p.add_argument("--path", action="store_true", help="print the page's file path instead")
    p.set_defaults(func=_run)

    p = sub.add_parser(
        "notebooks", help="copy the shipped notebooks into a folder, to open in JupyterLab",
        description="Copy the workbench notebooks (chemistry, case study, interactive study) "
        "into a folder, created if missing; files already there are left alone. Example: "
        "workbench notebooks my-notebooks && jupyter lab my-notebooks",
    )
    p.add_argument("folder", metavar="DIR", help="folder to copy them into")
    p.set_defaults(func=_copy_notebooks)


def _run(args: argparse.Namespace) -> None:
    found = pages()
    if args.topic is None:
        for topic, path in found.items():
            print(str(path) if args.path else topic)
        return
    if args.topic not in found:
        raise InputError(args.topic, f"no such page; pick one of {', '.join(found)}")
    path = found[args.topic]
    print(str(path) if args.path else path.read_text(encoding="utf-8"), end="" if not
          args.path else "\n")


def copy_notebooks(folder: Path) -> list[Path]:
    """Copy the shipped notebooks into a folder, each whole or not at all.

    Parameters
    ----------
    folder : pathlib.Path
        Destination; created if missing.

    Returns
    -------
    list of pathlib.Path
        The files written.

    Raises
    ------
    InputError
        A notebook of the same name is already there (nothing is written then), or the folder
        cannot be made.
    """
    from workbench.io.files import write_text_atomic

    sources = sorted(NOTEBOOKS.glob("*.ipynb"))
    for src in sources:
        if (folder / src.name).exists():
            raise InputError(str(folder / src.name), "exists; copy into another folder, or "
                             "move it away first")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(str(folder), f"cannot make the folder ({exc.strerror})") from None
    return [write_text_atomic(folder / src.name, src.read_text(encoding="utf-8"),
                              suffix=".ipynb", option="DIR") for src in sources]


def _copy_notebooks(args: argparse.Namespace) -> None:
    for path in copy_notebooks(Path(args.folder)):
        print(path)
