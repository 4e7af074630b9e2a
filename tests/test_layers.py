"""The package's folders are its layers: a module imports only from its own layer or below.

Rule (DEVELOPERS.md, Layout): core <- models <- io <- study <- interfaces. Checked on the
import statements of every module, so a wrong-way import fails here, not in review.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "workbench"
ORDER = ("core", "models", "io", "study", "interfaces")


def _layer(module: str) -> int | None:
    parts = module.split(".")
    if parts[0] != "workbench" or len(parts) < 2 or parts[1] not in ORDER:
        return None
    return ORDER.index(parts[1])


def _imports(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            out.append(node.module)
            out += [f"{node.module}.{a.name}" for a in node.names]
    return out


MODULES = sorted(p for p in PACKAGE.rglob("*.py")
                 if p.relative_to(PACKAGE).parts[0] in ORDER)


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_point_down(path):
    own = ORDER.index(path.relative_to(PACKAGE).parts[0])
    for name in _imports(path):
        layer = _layer(name)
        assert layer is None or layer <= own, f"{path.name} imports {name} from a layer above"


def test_every_module_is_in_a_layer():
    loose = [p.name for p in PACKAGE.glob("*.py") if p.name not in ("__init__.py", "__main__.py")]
    assert loose == []
