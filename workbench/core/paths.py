"""Where the package's shipped files are: one home for each folder."""

from __future__ import annotations

from pathlib import Path

#: The shipped data folder (``workbench/data``): the invented demo profiles, vehicles, maps and
#: the demo study.
DATA = Path(__file__).resolve().parents[1] / "data"
