"""Export panel: write the client report of the last good result to an HTML file.

The report (:func:`workbench.report.write_report`) is written whole or not at all; the panel
shows the path written, or the error (a name not ending in ``.html``, a missing folder, a
folder that cannot be written) beside the button.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import ipywidgets as widgets

from workbench.engine import read_map
from workbench.errors import InputError
from workbench.panels.fields import error_html, esc, label, text_box
from workbench.panels.state import StudyState
from workbench.report import write_report

#: File name the panel proposes.
DEFAULT_NAME = "fuel-switch-report.html"


def export_report(state: StudyState, name: str, *, folder: Path) -> Path:
    """Write the report of the state's last good result.

    Parameters
    ----------
    state : StudyState
        The shared state.
    name : str
        File name or path (user text); relative names are taken from ``folder``.
    folder : pathlib.Path
        Folder of relative names.

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    InputError
        No result yet, an empty name, or what :func:`workbench.report.write_report` rejects.
    """
    if state.result is None:
        raise InputError("report", "no result yet; fix the inputs so the study runs")
    if not name.strip():
        raise InputError("file name", "is empty; give a name ending in .html")
    target = Path(name.strip()).expanduser()
    if not target.is_absolute():
        target = folder / target
    grids = {c.id: read_map(c.engine_map) for c in state.study.inputs.classes}
    return write_report(state.result, target, study_text=state.study.to_toml(), map_grid=grids)


class ExportPanel(widgets.VBox):
    """A file name, a button that writes the report, and what happened.

    Parameters
    ----------
    state : StudyState
        The shared state.
    folder : pathlib.Path, optional
        Folder of relative file names; the working folder when omitted.
    """

    def __init__(self, state: StudyState, *, folder: Path | None = None) -> None:
        self.state = state
        self.folder = Path(folder) if folder is not None else Path.cwd()
        self.name = text_box(DEFAULT_NAME, width="320px")
        self.button = widgets.Button(description="Write report", icon="file",
                                     button_style="primary")
        self.message = widgets.HTML("")
        self.written: Path | None = None
        self.button.on_click(self._clicked)
        super().__init__([
            widgets.HTML("<h3>Export</h3>"),
            widgets.HBox([label("report file (.html)"), self.name, self.button],
                         layout=widgets.Layout(align_items="center")),
            self.message,
        ])

    def _clicked(self, _button: Any) -> None:
        self.message.value = "writing the report …"
        try:
            self.written = export_report(self.state, self.name.value, folder=self.folder)
        except InputError as exc:
            self.message.value = error_html(exc)
            return
        self.message.value = (f'Report written to <code class="wb-written">'
                              f"{esc(self.written.resolve())}</code>")
