"""Set-up shared by the workbench notebooks: call :func:`setup_notebook` in the first cell.

Only notebooks import this module; models, the study layer and the CLI never do.

Why the renderer matters: inside a kernel, recent Plotly versions show a figure as the bare
Plotly mimetype, which JupyterLab draws but nbconvert cannot, so an exported notebook would
silently lose its charts. ``"plotly_mimetype+notebook"`` sends both: the mimetype for
JupyterLab and an HTML ``<div>`` with a ``Plotly.newPlot`` call for the exported page, with
plotly.js embedded once (offline, no CDN) before the first figure. Plotly's notebook renderer
also links MathJax from a CDN into every figure; the workbench charts use no LaTeX, so
:class:`OfflineNotebookRenderer` leaves that link out and an exported page asks no server.
"""

from __future__ import annotations

import re
from typing import Any

import pandas as pd
import plotly.io as pio

from workbench.interfaces.charts import TEMPLATE

_MATHJAX_SCRIPT = re.compile(r"<script[^>]*src=\"[^\"]*mathjax[^\"]*\"[^>]*>\s*</script>",
                             re.IGNORECASE)

try:  # a private module of plotly (pyproject bounds plotly's major version for it)
    from plotly.io._base_renderers import NotebookRenderer
except ImportError:  # moved in a later plotly: its stock renderer, MathJax link and all
    #: Plotly renderer of the notebooks: JupyterLab's mimetype plus self-contained HTML.
    NOTEBOOK_RENDERER = "plotly_mimetype+notebook"
else:

    class OfflineNotebookRenderer(NotebookRenderer):
        """Plotly's notebook renderer without the MathJax link it adds to every figure."""

        def to_mimebundle(self, fig_dict: dict[str, Any]) -> dict[str, str]:
            """The figure's HTML, with no script loaded from a CDN."""
            bundle = super().to_mimebundle(fig_dict)
            bundle["text/html"] = _MATHJAX_SCRIPT.sub("", bundle["text/html"])
            return bundle

    pio.renderers["workbench_notebook"] = OfflineNotebookRenderer()
    NOTEBOOK_RENDERER = "plotly_mimetype+workbench_notebook"


def setup_notebook(*, renderer: str = NOTEBOOK_RENDERER, precision: int = 3) -> None:
    """Configure Plotly and pandas for a workbench notebook.

    Sets the default Plotly renderer (plotly.js is embedded into the notebook before the
    first figure is shown), the Plotly template of the workbench charts, and how many
    decimals pandas shows.

    Parameters
    ----------
    renderer : str
        Plotly renderer name(s) joined by ``+``; the default renders in JupyterLab and in
        HTML exported with nbconvert.
    precision : int
        Decimals pandas shows for floats [-].

    Raises
    ------
    ValueError
        An unknown renderer name (Plotly's own message).

    Examples
    --------
    >>> from workbench.interfaces.notebook import setup_notebook
    >>> setup_notebook()
    """
    pio.renderers.default = renderer
    pio.templates.default = TEMPLATE
    pd.set_option("display.precision", precision)
    pd.set_option("display.max_columns", 40)
    pd.set_option("display.width", 120)
