"""The package as installed: its data inside it, its metadata, its fall-backs."""

from __future__ import annotations

import os
import subprocess
import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_fuels_and_docs_in_the_checkout_are_the_package_data():
    # One copy: the package's data folders are links to the checkout's fuels/ and docs/, which
    # setuptools copies as real files into the wheel (.ci/run lists the wheel to check it).
    for name in ("fuels", "docs", "notebooks"):
        link = ROOT / "workbench" / "data" / name
        assert link.is_symlink() and link.resolve() == (ROOT / name).resolve()


def test_notebooks_are_copied_out_whole(run_cli, tmp_path):
    import json

    code, _, _ = run_cli("notebooks", str(tmp_path / "nb"))
    assert code == 0
    names = sorted(p.name for p in (tmp_path / "nb").iterdir())
    assert names == ["case-study.ipynb", "chemistry.ipynb", "study.ipynb"]
    for name in names:  # the files of the checkout, byte for byte, and valid notebooks
        copied = (tmp_path / "nb" / name).read_bytes()
        assert copied == (ROOT / "notebooks" / name).read_bytes()
        assert json.loads(copied)["nbformat"] == 4
    code, _, err = run_cli("notebooks", str(tmp_path / "nb"))
    assert code == 2 and "exists" in err


def test_metadata_is_spdx_and_plotly_is_bounded():
    # PEP 639 (common practice, no source beyond it): `license` is an SPDX expression, with
    # no licence classifier beside it; setuptools reads it from version 77 on.
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    project = meta["project"]
    assert project["license"] == "MIT"
    assert not any(c.startswith("License ::") for c in project["classifiers"])
    assert "setuptools>=77" in meta["build-system"]["requires"]
    plotly = next(d for d in project["dependencies"] if d.startswith("plotly"))
    assert "<" in plotly  # interfaces/notebook.py reaches into plotly.io._base_renderers
    assert any(d.startswith("voila") for d in project["optional-dependencies"]["app"])


def test_notebook_setup_falls_back_when_plotlys_private_module_moves():
    code = (
        "import sys, importlib.abc\n"
        "import plotly.io._renderers\n"
        "sys.modules.pop('plotly.io._base_renderers', None)\n"
        "class Moved(importlib.abc.MetaPathFinder):\n"
        "    def find_spec(self, name, path, target=None):\n"
        "        if name == 'plotly.io._base_renderers':\n"
        "            raise ImportError('moved')\n"
        "sys.meta_path.insert(0, Moved())\n"
        "from workbench.interfaces import notebook\n"
        "notebook.setup_notebook()\n"
        "print(plotly.io.renderers.default)\n"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env,
                         check=True, timeout=120)
    assert out.stdout.strip() == "plotly_mimetype+notebook"
