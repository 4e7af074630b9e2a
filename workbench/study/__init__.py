"""The study layer: a checked study (``Study``) in, tidy result tables (``StudyResult``) out."""

from workbench.study.results import StudyResult
from workbench.study.runner import run
from workbench.study.studyfile import Study, read_study, write_study

__all__ = ["Study", "StudyResult", "read_study", "run", "write_study"]
