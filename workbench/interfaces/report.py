"""The study report: one self-contained HTML file that a client opens offline in a browser.

:func:`html_report` lays out the job and the question, the safety caution, the inputs and
assumptions, every chart of
:func:`workbench.interfaces.charts.all_figures`, every table of the result,
the sources of reference data, the software versions and a SHA-256 hash of the study file.
plotly.js is embedded once, in the head; each chart is a ``<div>`` with its own small script.
Every piece of user text is HTML-escaped. :func:`write_report` writes the file whole or not at
all (a temporary file in the same folder, then :func:`os.replace`).
"""

from __future__ import annotations

import os
import platform
from collections.abc import Mapping
from datetime import UTC, datetime
from importlib import metadata
from pathlib import Path

import pandas as pd
import plotly.offline

import workbench
from workbench.core.text import escape_html as _esc
from workbench.core.text import sha256_hex
from workbench.interfaces.charts import MapGrid, all_figures
from workbench.io.files import check_target, write_text_atomic
from workbench.models.engine import EngineMap, read_map
from workbench.study.results import StudyResult, missing_reason
from workbench.study.studyfile import Study

#: The caution every report carries, word for word.
SAFETY_CAUTION = (
    "LPG, CNG and hydrogen are stored under pressure and are flammable. Conversions, tank "
    "fitting and periodic inspection must be done by licensed installers and workshops, and "
    "local codes and type-approval rules decide what is allowed. Every figure in this report "
    "is an estimate from models and assumed inputs, not a measurement or a guarantee."
)

#: The line shown when the study is the fictional demo.
DEMO_NOTICE = (
    "Demo study: the fleet, prices, duty profiles and engine maps are INVENTED numbers for a "
    "fictional scenario. Do not use these figures for any real decision."
)

#: Distributions whose versions the report lists (label -> distribution name).
VERSIONED = {"cantera": "cantera", "numpy": "numpy", "pandas": "pandas", "plotly": "plotly",
             "CoolProp": "CoolProp"}

#: Assumption values that mark a study as the fictional demo (key ``demo``).
_TRUE = {"true", "yes", "1"}

_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;
max-width:1200px;padding:0 24px 48px;color:#222;line-height:1.45}
h1{margin-top:28px}h2{border-bottom:2px solid #ddd;padding-bottom:4px;margin-top:40px}
.caution{border-left:6px solid #D55E00;background:#fff4ec;padding:10px 16px;margin:16px 0}
.demo{border-left:6px solid #E69F00;background:#fff9e6;padding:10px 16px;margin:16px 0;
font-weight:600}
table{border-collapse:collapse;font-size:13px;margin:8px 0}
th,td{border:1px solid #ddd;padding:3px 8px;text-align:left;vertical-align:top}
th{background:#f3f3f3}table.data td{white-space:nowrap;font-variant-numeric:tabular-nums}
.scroll{overflow-x:auto;max-width:100%}
details{margin:10px 0}summary{cursor:pointer;font-weight:600}
.chart{margin:18px 0 28px}
code{font-size:12px;word-break:break-all}
nav ul{columns:2}
"""


def input_hash(study_text: str) -> str:
    """SHA-256 of the study file's text (UTF-8), as 64 hex digits."""
    return sha256_hex(study_text)


def software_versions() -> dict[str, str]:
    """Versions of Python, the workbench and the libraries the figures depend on.

    Returns
    -------
    dict of str to str
        ``"not installed"`` for a library that is missing.
    """
    versions = {"python": platform.python_version(), "workbench": workbench.__version__}
    for label, dist in VERSIONED.items():
        try:
            versions[label] = metadata.version(dist)
        except metadata.PackageNotFoundError:
            versions[label] = "not installed"
    return versions


def is_demo(result: StudyResult) -> bool:
    """Whether ``result.assumptions["demo"]`` says the study is the fictional demo."""
    return str(result.assumptions.get("demo", "")).strip().lower() in _TRUE


def _key_value_table(items: Mapping[str, object], head: tuple[str, str]) -> str:
    rows = "".join(f"<tr><td>{_esc(k)}</td><td>{_esc(v)}</td></tr>" for k, v in items.items())
    return (f'<table class="kv"><thead><tr><th>{_esc(head[0])}</th><th>{_esc(head[1])}</th>'
            f"</tr></thead><tbody>{rows}</tbody></table>")


#: Rows of a table printed in the report; longer tables (Monte Carlo draws) are cut.
MAX_TABLE_ROWS = 400


def _format_number(value: float) -> str:
    return f"{value:,.4g}" if abs(value) < 1e6 else f"{value:,.0f}"


def _table_html(table: pd.DataFrame) -> str:
    return table.to_html(index=False, escape=True, na_rep="–", float_format=_format_number,
                         border=0, classes="data")


def _candidates_shown(table: pd.DataFrame) -> pd.DataFrame:
    """The candidates table as text, each missing number in the words of its reason."""
    records = table.to_dict("records")
    return pd.DataFrame([
        {k: missing_reason(r, k) or (_format_number(v) if isinstance(v, float) else v)
         for k, v in r.items()} for r in records], columns=table.columns)


def _job(result: StudyResult) -> str:
    cands = result.candidates
    base = cands.loc[cands["is_baseline"].astype(bool), "name"]
    others = cands.loc[~cands["is_baseline"].astype(bool), "name"]
    base_text = _esc(base.iloc[0]) if not base.empty else "the fleet as it runs today"
    other_text = ", ".join(_esc(n) for n in others) or "no candidate"
    question = result.assumptions.get("question")
    asked = f"<p><strong>Question:</strong> {_esc(question)}</p>" if question else ""
    return (
        "<p>A fleet planner must decide whether to convert the fleet to another fuel or keep "
        f"it as it is. This report compares <strong>{other_text}</strong> against the baseline "
        f"<strong>{base_text}</strong> on the fleet's own duty: fuel and energy per km, "
        "tank-to-wheel and well-to-wheel CO2, NOx from the flame and at the tailpipe as "
        "catalysts age, storage on board, cost per km, net present value and payback of the "
        "programme, and how sure those figures are.</p>" + asked)


def html_report(
    result: StudyResult,
    *,
    study_text: str,
    map_grid: MapGrid | EngineMap | Mapping[str, MapGrid | EngineMap] | None = None,
) -> str:
    """The report as one self-contained HTML document.

    Parameters
    ----------
    result : StudyResult
        The study's result.
    study_text : str
        Text of the study file the result came from; its SHA-256 is printed.
    map_grid : MapGrid, EngineMap or mapping of them by vehicle class, optional
        Efficiency map(s) for the operating-point chart (see
        :func:`workbench.interfaces.charts.all_figures`).

    Returns
    -------
    str
        The HTML document, plotly.js embedded once.
    """
    figures = all_figures(result, map_grid=map_grid)
    charts = []
    for i, (key, fig) in enumerate(figures.items()):
        height = int(fig.layout.height or 480)
        div = fig.to_html(full_html=False, include_plotlyjs=False, div_id=f"chart-{i}",
                          default_height=f"{height}px",
                          config={"displaylogo": False, "responsive": True})
        charts.append(f'<section class="chart" data-chart="{_esc(key)}">{div}</section>')
    tables = []
    for name, table in result.tables().items():
        open_attr = " open" if name == "candidates" else ""
        shown = _candidates_shown(table) if name == "candidates" else table.head(MAX_TABLE_ROWS)
        cut = (f"<p>First {MAX_TABLE_ROWS} of {len(table)} rows; "
               "<code>workbench study run FILE --csv DIR</code> writes them all.</p>"
               if len(table) > MAX_TABLE_ROWS else "")
        tables.append(f'<details id="table-{name}"{open_attr}><summary>{name} '
                      f"({len(table)} rows)</summary>{cut}<div class=\"scroll\">"
                      f"{_table_html(shown)}</div></details>")
    demo = f'<p class="demo">{DEMO_NOTICE}</p>' if is_demo(result) else ""
    versions = software_versions()
    generated = datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC")
    title = _esc(result.title)
    sources = (_key_value_table(result.sources, ("item", "source")) if result.sources
               else "<p>The result lists no sources.</p>")
    assumptions = (_key_value_table(result.assumptions, ("input", "value"))
                   if result.assumptions else "<p>The result lists no assumptions.</p>")
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{title}</title>
<style>{_CSS}</style>
<script type="text/javascript">{plotly.offline.get_plotlyjs()}</script>
</head>
<body>
<h1>{title}</h1>
{demo}
<p class="caution" id="safety"><strong>Safety:</strong> {SAFETY_CAUTION}</p>
<nav><ul>
<li><a href="#job">The job and the question</a></li>
<li><a href="#inputs">Inputs and assumptions</a></li>
<li><a href="#charts">Charts</a></li>
<li><a href="#tables">Tables</a></li>
<li><a href="#sources">Sources of reference data</a></li>
<li><a href="#provenance">Software and inputs</a></li>
</ul></nav>
<h2 id="job">The job and the question</h2>
{_job(result)}
<p>Money is in {_esc(result.currency)}; "vs baseline" means candidate minus baseline, so a
positive NPV means the candidate saves money.</p>
<h2 id="inputs">Inputs and assumptions</h2>
{assumptions}
<h2 id="charts">Charts</h2>
{"".join(charts)}
<h2 id="tables">Tables</h2>
<p>Column names carry their units; money columns are in {_esc(result.currency)}.</p>
{"".join(tables)}
<h2 id="sources">Sources of reference data</h2>
{sources}
<h2 id="provenance">Software and inputs</h2>
{_key_value_table(versions, ("software", "version"))}
<p>SHA-256 of the study file: <code id="input-hash">{input_hash(study_text)}</code></p>
<p>Generated {generated}.</p>
<p class="caution"><strong>Safety:</strong> {SAFETY_CAUTION}</p>
</body>
</html>
"""


def write_report(
    result: StudyResult,
    path: str | os.PathLike[str],
    *,
    study_text: str,
    map_grid: MapGrid | EngineMap | Mapping[str, MapGrid | EngineMap] | None = None,
) -> Path:
    """Write the HTML report, whole or not at all.

    Parameters
    ----------
    result : StudyResult
        The study's result.
    path : str or os.PathLike
        Output file; must end in ``.html`` and its folder must exist.
    study_text : str
        Text of the study file (hashed into the report).
    map_grid : MapGrid, EngineMap or mapping of them by vehicle class, optional
        Efficiency map(s) for the operating-point chart.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    InputError
        If the path is not an ``.html`` file in an existing folder, or cannot be written.
    """
    target = Path(path)
    check_target(target, suffix=".html", option=f"-o/path {target}")
    return write_text_atomic(target, html_report(result, study_text=study_text,
                                                  map_grid=map_grid),
                             suffix=".html", option=f"-o/path {target}")


def write_study_report(study: Study, result: StudyResult, path: str | os.PathLike[str]
                       ) -> Path:
    """Write the report of a study's result, with each vehicle class's efficiency map.

    Parameters
    ----------
    study : Study
        The study that was run (its text is hashed into the report).
    result : StudyResult
        Its result.
    path : str or os.PathLike
        Output ``.html`` file.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    maps = {c.id: read_map(c.engine_map) for c in study.inputs.classes}
    return write_report(result, path, study_text=study.to_toml(), map_grid=maps)
