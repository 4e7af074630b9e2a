"""``workbench docs``: the documentation shipped with the package, printed as Markdown.

The pages are package data (``workbench/data/docs``, which the checkout's top-level ``docs/``
holds, and the fuel-file format ``workbench/data/fuels/README.md``), so ``--help`` texts can
point at them in an installed copy without a checkout.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from workbench.core.errors import InputError
from workbench.core.paths import DATA

#: Folder of the shipped documentation pages.
DOCS = DATA / "docs"


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
