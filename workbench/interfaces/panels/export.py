"""Export panel: write the client report of the last good result, and save the study file.

The report (:func:`workbench.interfaces.report.write_study_report`) and the study file
(:func:`workbench.study.studyfile.write_study`) are written whole or not at all; the panel shows the
path written, or the error (a wrong file ending, a missing folder, a folder that cannot be
written) beside the button.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import ipywidgets as widgets

from workbench.core.errors import InputError
from workbench.interfaces.panels.fields import error_html, esc, label, text_box
from workbench.interfaces.panels.state import StudyState
from workbench.interfaces.report import write_study_report
from workbench.study.studyfile import write_study

#: File names the panel proposes.
DEFAULT_NAME = "fuel-switch-report.html"
DEFAULT_STUDY_NAME = "my-study.toml"


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
        No result yet, an empty name, or what
        :func:`workbench.interfaces.report.write_report` rejects.
    """
    if state.result is None:
        raise InputError("report", "no result yet; fix the inputs so the study runs")
    if not name.strip():
        raise InputError("file name", "is empty; give a name ending in .html")
    target = Path(name.strip()).expanduser()
    if not target.is_absolute():
        target = folder / target
    return write_study_report(state.study, state.result, target)


def save_study(state: StudyState, name: str, *, folder: Path) -> tuple[Path, bool]:
    """Save the state's study as a study file.

    Parameters
    ----------
    state : StudyState
        The shared state.
    name : str
        File name or path (user text) ending in ``.toml``; relative names are taken from
        ``folder``.
    folder : pathlib.Path
        Folder of relative names.

    Returns
    -------
    path : pathlib.Path
        The file written.
    moved : bool
        True when the file lands in another folder than the study was read from, so that
        relative file names in it (profiles, vehicles, maps) may no longer resolve.
    """
    if not name.strip():
        raise InputError("study file name", "is empty; give a name ending in .toml")
    target = Path(name.strip()).expanduser()
    if not target.is_absolute():
        target = folder / target
    path = write_study(state.study, target)
    return path, path.resolve().parent != state.study.base_dir.resolve()


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
        self.study_name = text_box(DEFAULT_STUDY_NAME, width="320px")
        self.save_button = widgets.Button(description="Save study file", icon="save")
        self.save_message = widgets.HTML("")
        self.saved: Path | None = None
        self.save_button.on_click(self._save_clicked)
        super().__init__([
            widgets.HTML("<h3>Export</h3>"),
            widgets.HBox([label("report file (.html)"), self.name, self.button],
                         layout=widgets.Layout(align_items="center")),
            self.message,
            widgets.HBox([label("study file (.toml)"), self.study_name, self.save_button],
                         layout=widgets.Layout(align_items="center")),
            self.save_message,
        ])

    def _save_clicked(self, _button: Any) -> None:
        try:
            self.saved, moved = save_study(self.state, self.study_name.value,
                                           folder=self.folder)
        except InputError as exc:
            self.save_message.value = error_html(exc)
            return
        note = (" (another folder than the study came from: relative file names in it are "
                "read from the new folder)") if moved else ""
        self.save_message.value = (f'Study saved to <code class="wb-saved">'
                                   f"{esc(self.saved.resolve())}</code>{esc(note)}")

    def _clicked(self, _button: Any) -> None:
        self.message.value = "writing the report …"
        try:
            self.written = export_report(self.state, self.name.value, folder=self.folder)
        except InputError as exc:
            self.message.value = error_html(exc)
            return
        self.message.value = (f'Report written to <code class="wb-written">'
                              f"{esc(self.written.resolve())}</code>")
