"""Fuel-switch workbench: compare candidate fuels for a vehicle fleet.

The models (``combustion``, ``nox``, ``storage``, ``duty``, ``vehicle``, ``engine``,
``economics``) import without plotly or ipywidgets; the panels, charts and report import them.
``workbench.open_study`` (the interactive app) is loaded on first use, so ``import workbench``
does not import ipywidgets. ``workbench.__version__`` is the installed distribution's version
(one string, in ``pyproject.toml``), read on first use.
"""

from typing import Any

from workbench.core.errors import InputError

__all__ = ["InputError", "__version__", "open_study"]

#: Name of the distribution whose metadata holds the version.
DISTRIBUTION = "fuelswitch-workbench"
#: Version reported when the package runs from a source tree that is not installed.
UNKNOWN_VERSION = "0+unknown"


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version(DISTRIBUTION)
    except PackageNotFoundError:
        return UNKNOWN_VERSION


def __getattr__(name: str) -> Any:
    if name == "__version__":
        value = _version()
        globals()["__version__"] = value
        return value
    if name == "open_study":
        from workbench.interfaces.panels import open_study

        return open_study
    raise AttributeError(f"module 'workbench' has no attribute {name!r}")
