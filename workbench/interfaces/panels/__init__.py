"""Interactive panels (ipywidgets) over a study: one per input group, plus results and export.

Each panel takes a shared :class:`StudyState` and works alone in a notebook cell; :class:`App`
(from :func:`open_study`) composes them. Widget changes write raw values into the study by key
path (``Study.with_value`` semantics); a value that fails its check shows its one-line error
beside the field and leaves the study and the last good results as they were.

This package imports ipywidgets and plotly; ``import workbench`` does not import it.
"""

from workbench.interfaces.panels.app import App, open_study
from workbench.interfaces.panels.candidates import CandidatesPanel
from workbench.interfaces.panels.economics import EconomicsPanel
from workbench.interfaces.panels.export import ExportPanel
from workbench.interfaces.panels.inputs import DutyPanel, EngineMapPanel
from workbench.interfaces.panels.programme import ProgrammePanel
from workbench.interfaces.panels.results import ResultsPanel
from workbench.interfaces.panels.state import StudyState

__all__ = ["App", "CandidatesPanel", "DutyPanel", "EconomicsPanel", "EngineMapPanel",
           "ExportPanel", "ProgrammePanel", "ResultsPanel", "StudyState", "open_study"]
