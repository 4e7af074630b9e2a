"""The study layer: a checked study (``Study``) in, tidy result tables (``StudyResult``) out.

The names below load on first use, so that ``workbench.study.fleet`` (imported by every worker
process of a fleet run) does not import the runner and its chemistry.
"""

from __future__ import annotations

import importlib
from typing import Any

_WHERE = {"StudyResult": "results", "run": "runner", "Study": "studyfile",
          "read_study": "studyfile", "write_study": "studyfile"}

__all__ = ["Study", "StudyResult", "read_study", "run", "write_study"]


def __getattr__(name: str) -> Any:
    if name in _WHERE:
        return getattr(importlib.import_module(f"workbench.study.{_WHERE[name]}"), name)
    raise AttributeError(f"module 'workbench.study' has no attribute {name!r}")
