"""Fuel-switch workbench: compare candidate fuels for a vehicle fleet.

The models (``combustion``, ``nox``, ``storage``, ``duty``, ``vehicle``, ``engine``,
``economics``) import without plotly or ipywidgets; the panels, charts and report import them.
"""

from workbench.errors import InputError

__all__ = ["InputError", "__version__"]
__version__ = "0.1.0"
