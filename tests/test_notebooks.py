"""Every notebook in notebooks/ runs from top to bottom, and is committed without outputs.

Notebooks are found by globbing, so a notebook added later is covered without touching this file.
A notebook whose metadata has ``"workbench": {"export": true}`` must also export to HTML with
nbconvert with every Plotly figure drawn and plotly.js embedded (offline, no CDN): the Plotly
renderer pitfall of /work/shared/STACK-NOTES.md ("exported HTML silently has no charts").
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient
from nbclient.exceptions import CellExecutionError, CellTimeoutError, DeadKernelError

NOTEBOOK_DIR = Path(__file__).resolve().parents[1] / "notebooks"
NOTEBOOKS = sorted(NOTEBOOK_DIR.glob("*.ipynb"))
#: Mimetype of a Plotly figure in a notebook output: one per figure displayed.
PLOTLY_MIME = "application/vnd.plotly.v1+json"
#: Per-cell limit [s]: the slowest cell (a kinetics sweep) takes a few seconds on 2 cores.
CELL_TIMEOUT = 180


def _read(path: Path) -> nbformat.NotebookNode:
    return nbformat.read(path, as_version=4)


def _is_exported(path: Path) -> bool:
    return bool(_read(path).metadata.get("workbench", {}).get("export", False))


EXPORTED = [p for p in NOTEBOOKS if _is_exported(p)]


@pytest.fixture(scope="module")
def python3_kernel(tmp_path_factory):
    """A ``python3`` kernelspec that runs this very interpreter.

    ipykernel (test extra) ships a ``python3`` spec into the environment, but a ``python3`` spec
    in the user's Jupyter directory (left by ``ipykernel install --user`` from another Python)
    could win the lookup and start a kernel without this checkout installed. A spec written by
    ipykernel for ``sys.executable``, first on ``JUPYTER_PATH``, removes the doubt without
    touching the user's directories.
    """
    from ipykernel.kernelspec import write_kernel_spec

    root = tmp_path_factory.mktemp("jupyter")
    write_kernel_spec(str(root / "kernels" / "python3"))
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("JUPYTER_PATH", str(root))
        from jupyter_client.kernelspec import KernelSpecManager

        spec = KernelSpecManager().get_kernel_spec("python3")
        assert spec.argv[0] == sys.executable, spec.argv
        yield


_EXECUTED: dict[Path, nbformat.NotebookNode] = {}


def _executed(path: Path) -> nbformat.NotebookNode:
    """The notebook run in its own directory (once per test session), or a failed test."""
    if path not in _EXECUTED:
        nb = _read(path)
        client = NotebookClient(
            nb, timeout=CELL_TIMEOUT, kernel_name="python3",
            resources={"metadata": {"path": str(path.parent)}},
        )
        try:
            client.execute()
        except (CellExecutionError, CellTimeoutError, DeadKernelError) as exc:
            pytest.fail(f"{path.name}: {type(exc).__name__}: {exc}", pytrace=False)
        _EXECUTED[path] = nb
    return _EXECUTED[path]


def _figure_count(nb: nbformat.NotebookNode) -> int:
    return sum(
        PLOTLY_MIME in out.get("data", {})
        for cell in nb.cells if cell.cell_type == "code"
        for out in cell.outputs
    )


def test_notebooks_are_found():
    # Guards the glob: an empty parametrisation would pass silently.
    assert NOTEBOOKS, f"no notebooks in {NOTEBOOK_DIR}"


@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.stem)
def test_committed_without_outputs(path):
    # Outputs are regenerated here; committed ones bloat the repository (plotly.js is ~5 MB)
    # and go stale.
    dirty = [
        i for i, cell in enumerate(_read(path).cells)
        if cell.cell_type == "code" and (cell.outputs or cell.execution_count is not None)
    ]
    assert not dirty, f"{path.name}: clear the outputs of cells {dirty} before saving"


@pytest.mark.slow
@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.stem)
def test_runs_top_to_bottom(path, python3_kernel):
    nb = _executed(path)
    code_cells = [c for c in nb.cells if c.cell_type == "code"]
    assert all(c.execution_count is not None for c in code_cells), "a cell was not run"


@pytest.mark.slow
@pytest.mark.parametrize("path", EXPORTED, ids=lambda p: p.stem)
def test_export_draws_every_figure_offline(path, python3_kernel):
    import plotly.offline
    from nbconvert import HTMLExporter

    nb = _executed(path)
    n_figures = _figure_count(nb)
    assert n_figures > 0, f"{path.name} is marked for export but shows no Plotly figure"
    html, _ = HTMLExporter().from_notebook_node(nb)

    # Each figure is a div with a Plotly.newPlot call on it (the "notebook" renderer's HTML);
    # neither string occurs in the plotly.js bundle itself.
    assert len(re.findall(r'class="plotly-graph-div"', html)) >= n_figures
    assert html.count("Plotly.newPlot(") >= n_figures
    # plotly.js is embedded (its licence header names the version) ...
    version = plotly.offline.get_plotlyjs_version()
    assert html.count(f"plotly.js v{version}") == 1, "plotly.js must be embedded exactly once"
    # ... and never fetched from a CDN.
    sources = re.findall(r"<script[^>]*\bsrc=[\"']([^\"']+)", html)
    assert not [s for s in sources if "plot" in s.lower()], sources
    # Nor do the figures link Plotly's MathJax 3 (nbconvert's page template loads its own
    # MathJax 2 for Markdown; that one is the template's, not ours).
    assert not re.search(r"mathjax/3[^\"']*tex-svg", html)
