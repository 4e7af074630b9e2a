"""The study app: every panel over one shared state, in one widget.

:func:`open_study` reads a study (or takes one), runs it and lays out the input panels in tabs
(economics, fuels, duty, efficiency map), the results below them, then the export. A status
line shows what the current run is doing (the first run and a fuel or file change do chemistry
and take seconds; a money change takes a fraction of a second).
"""

from __future__ import annotations

from pathlib import Path

import ipywidgets as widgets

from workbench.interfaces.panels.candidates import CandidatesPanel
from workbench.interfaces.panels.economics import EconomicsPanel
from workbench.interfaces.panels.export import ExportPanel
from workbench.interfaces.panels.fields import esc
from workbench.interfaces.panels.inputs import DutyPanel, EngineMapPanel
from workbench.interfaces.panels.programme import ProgrammePanel
from workbench.interfaces.panels.results import ResultsPanel
from workbench.interfaces.panels.state import StudyState
from workbench.interfaces.report import SAFETY_CAUTION
from workbench.study.studyfile import Study, read_study


class StatusLine(widgets.HTML):
    """The state's progress text, kept up to date."""

    def __init__(self, state: StudyState) -> None:
        super().__init__(self._html(state.status))
        state.on_progress(lambda text: setattr(self, "value", self._html(text)))

    @staticmethod
    def _html(text: str) -> str:
        return f'<div class="wb-status" style="color:#555"><i>{esc(text)}</i></div>'


class FleetProgress(widgets.HBox):
    """A bar of the vehicles a fleet run has done (a class run from its logs), fed by the
    state's vehicle progress: the ``(done, total)`` callback the terminal prints
    (``workbench.study.fleet.Progress``). Hidden until a fleet run reports; made after the
    state's first run (:func:`open_study` runs the study before laying out the panels), it
    starts from the last report of that run.

    Attributes
    ----------
    bar : ipywidgets.IntProgress
        ``value`` vehicles done of ``max``.
    label : ipywidgets.Label
        ``"7 of 13 vehicles run"``.
    """

    def __init__(self, state: StudyState) -> None:
        self.bar = widgets.IntProgress(value=0, min=0, max=1, description="vehicles",
                                       bar_style="info")
        self.label = widgets.Label("")
        super().__init__([self.bar, self.label], layout=widgets.Layout(display="none"))
        state.on_vehicles(self.update)
        if state.vehicle_progress is not None:
            self.update(*state.vehicle_progress)

    def update(self, done: int, total: int) -> None:
        """Show ``done`` of ``total`` vehicles [-]; green when the run is through."""
        self.bar.value = 0  # before max, so a shorter run's max never clips the old value
        self.bar.max = max(total, 1)
        self.bar.value = done
        self.bar.bar_style = "success" if done >= total else "info"
        self.label.value = f"{done} of {total} vehicles run"
        self.layout.display = None


class App(widgets.VBox):
    """Every panel of the workbench over one :class:`StudyState`.

    Parameters
    ----------
    state : StudyState
        The shared state (already run).
    export_dir : pathlib.Path, optional
        Folder of relative report names.

    Attributes
    ----------
    state : StudyState
        The shared state.
    economics, programme, candidates, duty, engine_map, results, export : widgets
        The panels.
    status, fleet_progress : widgets
        What the current run is doing; the vehicles a fleet run has done.
    """

    def __init__(self, state: StudyState, *, export_dir: Path | None = None) -> None:
        self.state = state
        self.economics = EconomicsPanel(state)
        self.programme = ProgrammePanel(state)
        self.candidates = CandidatesPanel(state)
        self.duty = DutyPanel(state, plot=False)
        self.engine_map = EngineMapPanel(state, plot=False)
        self.results = ResultsPanel(state)
        self.export = ExportPanel(state, folder=export_dir)
        self.status = StatusLine(state)
        self.fleet_progress = FleetProgress(state)
        self.tabs = widgets.Tab(children=[self.economics, self.programme, self.candidates,
                                          self.duty, self.engine_map],
                                titles=("Economics", "Programme", "Fuels", "Duty",
                                        "Efficiency map"))
        self.tabs.observe(self._tab_opened, names="selected_index")
        title = state.result.title if state.result is not None else state.study.where
        super().__init__([
            widgets.HTML(f"<h2>{esc(title)}</h2><p style='border-left:6px solid #D55E00;"
                         f"padding:4px 10px;background:#fff4ec'><b>Safety:</b> "
                         f"{esc(SAFETY_CAUTION)}</p>"),
            self.results.verdict, self.status, self.fleet_progress, self.tabs, self.results,
            self.export,
        ])

    def _tab_opened(self, change: dict) -> None:
        panel = self.tabs.children[change["new"]]
        if isinstance(panel, DutyPanel | EngineMapPanel):
            panel.show_plot()

    @property
    def study(self) -> Study:
        """The current study."""
        return self.state.study


def open_study(study_or_path: Study | str | Path = "demo", *, draws: int | None = None,
               upload_dir: Path | None = None, export_dir: Path | None = None) -> App:
    """Open a study in the app and run it.

    Parameters
    ----------
    study_or_path : Study, str or pathlib.Path
        A checked study, a study file, or ``"demo"`` for the shipped fictional demo.
    draws : int, optional
        Monte Carlo draws of every run; the study's own number when omitted.
    upload_dir : pathlib.Path, optional
        Where uploaded CSVs are kept; a temporary folder when omitted.
    export_dir : pathlib.Path, optional
        Folder of relative report names; the working folder when omitted.

    Returns
    -------
    App

    Raises
    ------
    InputError
        The study file cannot be read or fails its checks.
    """
    study = study_or_path if isinstance(study_or_path, Study) else read_study(study_or_path)
    return App(StudyState(study, draws=draws, upload_dir=upload_dir), export_dir=export_dir)
