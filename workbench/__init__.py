"""Fuel-switch workbench: compare candidate fuels for a vehicle fleet.

The models (``combustion``, ``nox``, ``storage``, ``duty``, ``vehicle``, ``engine``,
``economics``) import without plotly or ipywidgets; the panels, charts and report import them.
``workbench.open_study`` (the interactive app) is loaded on first use, so ``import workbench``
does not import ipywidgets.
"""

from typing import Any

from workbench.core.errors import InputError

__all__ = ["InputError", "__version__", "open_study"]
__version__ = "0.1.0"


def __getattr__(name: str) -> Any:
    if name == "open_study":
        from workbench.interfaces.panels import open_study

        return open_study
    raise AttributeError(f"module 'workbench' has no attribute {name!r}")
