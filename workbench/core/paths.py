"""Where the package's shipped files are: one home for each folder."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

#: The shipped data folder (``workbench/data``), package data read through importlib.resources
#: so an installed wheel finds it: the invented demo profiles, vehicles, maps and the demo
#: study, the fuel library (``fuels``) and the documentation pages (``docs``).
DATA = Path(resources.files("workbench").joinpath("data"))
