"""The study report: one self-contained HTML file that a client opens offline in a browser.

:func:`html_report` puts the answer first (a verdict per option, written from the result by
:mod:`workbench.interfaces.summary`), then the results side by side, every chart of
:func:`workbench.interfaces.charts.all_figures`, every input of the study as written and the
assumptions, caveats and limitations with the safety caution, the data (each table as a
compressed CSV attachment with a short preview; the study file itself attached), the sources
of reference data, the software versions and a SHA-256 hash of the study file.
plotly.js is embedded once, in the head; each chart is a ``<div>`` with its own small script.
Everything a reader sees goes through the naming layer (names, not ids or key paths) and
:mod:`workbench.interfaces.present` (labels with units, rounding). A print stylesheet gives a
clean A4/Letter document from the browser's "print to PDF". Every piece of user text is
HTML-escaped. :func:`write_report` writes the file whole or not at all.
"""

from __future__ import annotations

import base64
import gzip
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
from workbench.interfaces.charts import MapSource, all_figures
from workbench.interfaces.present import (
    TABLE_TITLES,
    column_label,
    reader_table,
    side_by_side,
    significant,
)
from workbench.interfaces.summary import (
    best_mix_text,
    best_option,
    programme_lines,
    verdicts,
)
from workbench.io.files import check_target, write_text_atomic
from workbench.study.results import RunMap, StudyResult, notice_lines
from workbench.study.runner import run_maps
from workbench.study.studyfile import Study

#: The caution every report carries, word for word, once.
SAFETY_CAUTION = (
    "LPG, CNG and hydrogen are stored under pressure and are flammable. Conversions, tank "
    "fitting and periodic inspection must be done by licensed installers and workshops, and "
    "local codes and type-approval rules decide what is allowed. Every figure in this report "
    "is an estimate from models and assumed inputs, not a measurement or a guarantee."
)
#: The caution added when an option runs on traction batteries.
BATTERY_CAUTION = (
    "Traction batteries and depot chargers are high-voltage equipment: their installation, "
    "servicing, garaging and fire precautions are for trained and licensed people, and local "
    "electrical, building and fire codes decide what is allowed."
)
#: The caution added when an option runs on hydrogen fuel cells.
HYDROGEN_CAUTION = (
    "Fuel-cell vehicles carry hydrogen at 350-700 bar, which burns with a nearly invisible "
    "flame, and a high-voltage DC bus: vehicles, tanks, filling stations and the garages that "
    "service them (ventilation, gas detection) are for licensed practitioners, and local codes "
    "decide what is allowed."
)

#: The line shown when the study says its data are invented.
DEMO_NOTICE = (
    "Fictional data: the fleet, prices, duty profiles and engine maps of this study are "
    "INVENTED numbers. Do not use these figures for any real decision."
)

#: Distributions whose versions the report lists (label -> distribution name).
VERSIONED = {"cantera": "cantera", "numpy": "numpy", "pandas": "pandas", "plotly": "plotly",
             "CoolProp": "CoolProp"}

#: Stands in the page for its own size until the page is complete.
_SIZE_MARK = "@@size@@"
#: Rows of a table shown in the page; a longer table shows this many and is attached whole.
PREVIEW_ROWS = 12

#: What the models leave out or only screen, for the caveats section (each names its model).
LIMITATIONS = (
    "Tailpipe NOx is a screening estimate: engine-out NOx is a measured or typical value for "
    "the baseline engine, scaled for each fuel by the flame-chemistry propensity (thermal NO "
    "of GRI-Mech 3.0 at engine-like conditions), then reduced by a catalyst whose efficiency "
    "falls with age. Absolute flame NO in ppm runs low (constant-pressure flame); only its "
    "ratio between fuels is used.",
    "Fuel use comes from road-load physics over the duty profiles and the engines' efficiency "
    "maps; time spent outside a map is clipped to its edge and counted in the tables.",
    "Engine-out NOx defaults, catalyst lives and costs, tank factors and upstream CO2e factors "
    "are typical values, not measurements of this fleet; the sources table says which.",
    "CO2 from biogenic carbon (the ethanol in petrol, HVO, biomethane) is shown apart and left "
    "out of the CO2e, as greenhouse-gas inventories report it (IPCC 2006 Guidelines); what it "
    "took to make such a fuel is in its upstream CO2e, a pathway's default value that a "
    "certified actual value may replace.",
    "Uncertain physics inputs are evaluated at seven quantiles and interpolated per draw; "
    "the effects of several such inputs add (first order), interactions are left out.",
    "Vehicle classes that reach the end of their remaining life drop out of every option "
    "alike: replacement vehicles, new dedicated vehicles, electric drives, refuelling-station "
    "sizing and grants are outside this study unless entered as programme costs.",
    "Prices are in today's money with the study's escalation on top; taxes, financing and "
    "exchange rates are as the inputs state them.",
)

_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;
max-width:1100px;padding:0 24px 48px;color:#222;line-height:1.45}
h1{margin-top:28px;font-size:26px}h2{border-bottom:2px solid #ddd;padding-bottom:4px;
margin-top:40px}h3{margin:18px 0 6px}
.caution{border-left:6px solid #D55E00;background:#fff4ec;padding:10px 16px;margin:16px 0}
.demo{border-left:6px solid #E69F00;background:#fff9e6;padding:10px 16px;margin:16px 0;
font-weight:600}
.verdict{border:1px solid #ccc;border-radius:6px;padding:10px 16px;margin:12px 0}
.verdict h3{margin-top:4px}.raised{color:#a33a00;font-weight:600}
.best{font-size:17px;font-weight:600}
table{border-collapse:collapse;font-size:13px;margin:8px 0}
th,td{border:1px solid #ddd;padding:3px 8px;text-align:left;vertical-align:top}
th{background:#f3f3f3}table.data td{font-variant-numeric:tabular-nums}
.scroll{overflow-x:auto;max-width:100%}
details{margin:10px 0}summary{cursor:pointer;font-weight:600}
.chart{margin:18px 0 28px}
code{font-size:12px;word-break:break-all}
nav ul{columns:2}
.note{color:#555;font-size:13px}
@page{size:A4;margin:14mm}
@media print{
body{max-width:none;padding:0;font-size:11pt}
nav,.no-print{display:none}
h2{break-before:page;margin-top:0}
#summary{break-before:auto}
.chart,.verdict,tr,h3,h4{break-inside:avoid}h3,h4{break-after:avoid}
.chart{margin:8px 0}
.scroll{overflow:visible}
table{font-size:9pt;width:100%}
th,td{padding:2px 4px;word-break:break-word}
details>summary{list-style:none}
a[href^="data:"]::after{content:" (attached to the HTML file)";color:#555}
}
"""

#: Opens every folded section for printing and fits the charts to the page width.
_PRINT_JS = """
(function(){
  function fit(width){
    document.querySelectorAll('.js-plotly-plot').forEach(function(el){
      if (window.Plotly) { Plotly.relayout(el, width ? {width: width} : {autosize: true}); }
    });
  }
  function before(){
    document.querySelectorAll('details').forEach(function(d){ d.setAttribute('open', ''); });
    fit(680);
  }
  window.addEventListener('beforeprint', before);
  window.addEventListener('afterprint', function(){ fit(null); });
  if (window.matchMedia) {
    window.matchMedia('print').addEventListener('change', function(m){
      if (m.matches) { before(); } else { fit(null); }
    });
  }
})();
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


def _key_value_table(items: Mapping[str, object], head: tuple[str, str]) -> str:
    rows = "".join(f"<tr><td>{_esc(k)}</td><td>{_esc(v)}</td></tr>" for k, v in items.items())
    return (f'<table class="kv"><thead><tr><th>{_esc(head[0])}</th><th>{_esc(head[1])}</th>'
            f"</tr></thead><tbody>{rows}</tbody></table>")


def _table_html(table: pd.DataFrame) -> str:
    return table.to_html(index=False, escape=True, border=0, classes="data")


def attachment(name: str, data: bytes, mime: str, label: str) -> str:
    """A download link carrying ``data`` inside the page (works offline).

    Parameters
    ----------
    name : str
        File name offered to the browser.
    data : bytes
        The file's bytes (base64 inside a ``data:`` address).
    mime : str
        Media type.
    label : str
        Text of the link.

    Returns
    -------
    str
        An ``<a download>`` element.
    """
    href = f"data:{mime};base64,{base64.b64encode(data).decode('ascii')}"
    return (f'<a class="attachment" download="{_esc(name)}" href="{href}">{_esc(label)}</a> '
            f'<span class="note">({len(data) / 1024:,.0f} kB)</span>')


#: Decimals of the currency the Monte Carlo draws' NPVs are attached with: one row per draw
#: and option (tens of thousands), whose last digits of a cent carry no meaning but made the
#: table three quarters of the report's attachments.
MONTE_CARLO_DECIMALS = 2


def _csv_gz(table: pd.DataFrame, name: str = "") -> bytes:
    if name == "monte_carlo":
        table = table.round({"npv_vs_baseline": MONTE_CARLO_DECIMALS})
    return gzip.compress(table.to_csv(index=False).encode("utf-8"), mtime=0)


def _job(result: StudyResult) -> str:
    cands = result.candidates
    base = cands.loc[cands["is_baseline"].astype(bool), "name"]
    others = cands.loc[~cands["is_baseline"].astype(bool), "name"]
    base_text = _esc(base.iloc[0]) if not base.empty else "the fleet as it runs today"
    other_text = ", ".join(_esc(n) for n in others) or "no candidate"
    question = result.assumptions.get("question")
    asked = f"<p><strong>Question:</strong> {_esc(question)}</p>" if question else ""
    return (
        f"<p>This report compares <strong>{other_text}</strong> against the baseline "
        f"<strong>{base_text}</strong> on the fleet's own duty: fuel and energy per km, "
        "tank-to-wheel and well-to-wheel CO2, NOx from the flame and at the tailpipe as "
        "catalysts age, storage on board, cost per km, net present value and payback of the "
        "programme, and how sure those figures are. Money is in "
        f"{_esc(result.currency)}; \"vs baseline\" means candidate minus baseline, so a "
        "positive NPV means the candidate saves money.</p>" + asked)


def _summary(result: StudyResult) -> str:
    if result.candidates["is_baseline"].astype(bool).all():
        return "<p>The study has no candidate to compare.</p>"
    vs = verdicts(result)
    parts = [f'<p class="best">{_esc(best_option(result, vs))} {_esc(best_mix_text(result))}</p>']
    for v in vs:
        classes = "".join(f"<li>{_esc(line)}</li>" for line in v.per_class)
        em_class = ' class="raised"' if v.raises_emissions else ""
        parts.append(
            f'<div class="verdict" data-candidate="{_esc(v.candidate)}">'
            f"<h3>{_esc(v.name)}: {_esc(v.word)}</h3><p>{_esc(v.headline)}</p>"
            f"<p{em_class}>{_esc(v.emissions)}</p><p>{_esc(v.drivers)}</p>"
            f"<p>{_esc(v.breakeven)}</p>"
            + (f"<ul>{classes}</ul>" if classes else "") + "</div>")
    return "".join(parts)


def _inputs(result: StudyResult) -> str:
    if result.inputs.empty:
        return "<p>The result lists no inputs.</p>"
    out = []
    for section, rows in result.inputs.groupby("section", sort=False):
        out.append(f"<h3>{_esc(section)}</h3><div class=\"scroll\">"
                   f"{_table_html(rows[['input', 'value']])}</div>")
    return "".join(out)


def _caveats(result: StudyResult) -> str:
    items = list(LIMITATIONS)
    pk = result.per_km
    outside = pk[pk["share_out_of_map"] > 0.05]
    for _, r in outside.iterrows():
        items.append(f"{result.names.candidate(r['candidate'])}, "
                     f"{result.names.vehicle_class(r['vehicle_class'])}: "
                     f"{r['share_out_of_map']:.0%} of the time runs outside the engine map; "
                     "its fuel use there is an extrapolation.")
    for _, r in result.battery.iterrows():
        where = (f"{result.names.candidate(r['candidate'])}, "
                 f"{result.names.vehicle_class(r['vehicle_class'])}: ")
        if r["charging_message"]:
            items.append(where + r["charging_message"] + ".")
        if r["payload_loss_kg"] > r["payload_kg"]:
            items.append(where + f"the battery takes {significant(r['payload_loss_kg'])} kg of "
                         f"payload, more than the {significant(r['payload_kg'])} kg carried "
                         "today.")
    if result.fictional:
        items.insert(0, DEMO_NOTICE)
    lis = "".join(f"<li>{_esc(i)}</li>" for i in items)
    caution = (SAFETY_CAUTION + (" " + BATTERY_CAUTION if len(result.battery) else "")
               + (" " + HYDROGEN_CAUTION if len(result.fuel_cell) else ""))
    return (f"<ul>{lis}</ul><p class=\"caution\" id=\"safety\"><strong>Safety:</strong> "
            f"{caution}</p>")


def _data(result: StudyResult, study_text: str) -> str:
    out = ["<p>Each table is attached whole as a compressed CSV (glossary column names, full "
           "precision but the Monte Carlo draws' NPVs, to 0.01 of the currency; ids as in the "
           "study file); the page shows the first rows.</p>"]
    for name, table in result.tables().items():
        if name == "inputs" or table.empty:
            continue
        shown = reader_table(name, result, table.head(PREVIEW_ROWS))
        more = (f" — first {PREVIEW_ROWS} of {len(table):,} rows" if len(table) > PREVIEW_ROWS
                else "")
        link = attachment(f"{name}.csv.gz", _csv_gz(table, name), "application/gzip",
                          "Download the whole table (CSV, gzip)")
        out.append(f'<details id="table-{name}"><summary>{_esc(TABLE_TITLES[name])} '
                   f"({len(table):,} rows){more}</summary><p>{link}</p>"
                   f"<div class=\"scroll no-print\">{_table_html(shown)}</div></details>")
    out.append("<p>The study file this report was made from: "
               f"{attachment('study.toml', study_text.encode(), 'application/toml', 'study.toml')}"
               "</p>")
    return "".join(out)


def defaults_html(result: StudyResult) -> str:
    """Every default the run took, with value and source, as HTML (report and panels)."""
    if result.defaults.empty:
        return "<p>The study gave every value the run used.</p>"
    shown = reader_table("defaults", result)
    option = column_label("candidate", result.currency)
    rest = [c for c in shown.columns if c != option]
    # a default several options take alike (same class, value and source) is one row
    rows: dict[tuple[str, ...], list[str]] = {}
    for r in shown.to_dict("records"):
        rows.setdefault(tuple(r[c] for c in rest), []).append(r[option])
    shown = pd.DataFrame([{option: "; ".join(names), **dict(zip(rest, key, strict=True))}
                          for key, names in rows.items()], columns=shown.columns)
    return ("<p>The study did not give these values; the run took typical defaults. "
            "Replace them with the fleet's own where known; a row names every option that "
            "takes it.</p>"
            f'<div class="scroll" id="defaults-table">{_table_html(shown)}</div>')


def _decisions_html(result: StudyResult) -> str:
    """Each class's conversion on its own, and the best mix with its NPV."""
    if result.best_mix.empty:
        return "<p>The result has no per-class decisions.</p>"
    return (f'<p id="best-mix"><strong>{_esc(best_mix_text(result))}</strong> '
            "Each class's own conversion below leaves out the "
            "programme costs (station, workshop); the mix counts those of each candidate it "
            "uses once.</p>"
            f'<div class="scroll">{_table_html(reader_table("class_decisions", result))}</div>')


#: What each new drive's table says, before the table.
DRIVE_TABLES = {
    "battery": "Each pack is sized for the range at the end of its life on the class's own "
               "duty, carrying its own mass; the payload lost is the pack's mass less the "
               "combustion powertrain it replaces.",
    "fuel_cell": "The fuel cell meets the motor's demand on the class's own duty up to its "
                 "rated power, the buffer battery the peaks and the regenerated braking; the "
                 "hydrogen tank is sized for the range and carried with the stack and buffer. "
                 "Efficiencies are on the hydrogen's lower heating value.",
}


def _drive_html(result: StudyResult, name: str) -> str:
    """A new drive's table (``battery``, ``fuel_cell``) with its note (none: empty)."""
    table = result.tables()[name]
    if table.empty:
        return ""
    return (f'<h3 id="{name}">{_esc(TABLE_TITLES[name])}</h3><p>{_esc(DRIVE_TABLES[name])}</p>'
            f'<div class="scroll">{_table_html(reader_table(name, result))}</div>')


def programme_html(result: StudyResult) -> str:
    """The programme's phasing, grants, loans, fuel tax and stations as HTML (report and
    panels); empty when the study has none of them."""
    lines = "".join(f"<li>{_esc(line)}</li>" for line in programme_lines(result))
    out = f'<ul id="programme-lines">{lines}</ul>' if lines else ""
    if not result.stations.empty:
        out += ('<h3>Refuelling stations</h3><div class="scroll" id="stations-table">'
                f'{_table_html(reader_table("stations", result))}</div>'
                '<p class="caution">Station sizes are screening estimates for the cost: '
                "compressors, high-pressure storage and LPG tanks are designed, installed and "
                "inspected by licensed practitioners, and local codes decide what a depot may "
                "hold.</p>")
    return out or "<p>Every conversion is in year 0, paid upfront, with no grant, fuel tax " \
        "or station.</p>"


def _notices_html(result: StudyResult) -> str:
    return "".join(f'<p class="caution notice">{_esc(line)}</p>'
                   for line in notice_lines(result.notices))


def html_report(
    result: StudyResult,
    *,
    study_text: str,
    map_grid: MapSource | None = None,
) -> str:
    """The report as one self-contained HTML document.

    Parameters
    ----------
    result : StudyResult
        The study's result.
    study_text : str
        Text of the study file the result came from; its SHA-256 is printed and the file is
        attached.
    map_grid : MapGrid, EngineMap, mapping of them by vehicle class, or RunMap list, optional
        Efficiency map(s) for the operating-point charts (see
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
    demo = f'<p class="demo">{DEMO_NOTICE}</p>' if result.fictional else ""
    versions = software_versions()
    generated = datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC")
    title = _esc(result.title)
    sources = (_key_value_table(result.sources, ("item", "source")) if result.sources
               else "<p>The result lists no sources.</p>")
    assumptions = (_key_value_table(result.assumptions, ("assumption", "value"))
                   if result.assumptions else "<p>The result lists no assumptions.</p>")
    side = _table_html(side_by_side(result))
    per_class = "".join(
        f"<h4>{_esc(result.names.vehicle_class(vc))}</h4><div class=\"scroll\">"
        f"{_table_html(side_by_side(result, 'per_km', vc))}</div>"
        for vc in dict.fromkeys(result.per_km["vehicle_class"]))
    doc = f"""<!DOCTYPE html>
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
<h2 id="summary">Summary</h2>
{_summary(result)}
<p class="note">Safety and limitations: see <a href="#caveats">Caveats</a>.</p>
<nav class="no-print"><ul>
<li><a href="#summary">Summary</a></li>
<li><a href="#job">The question</a></li>
<li><a href="#results">Results side by side</a></li>
<li><a href="#classes">A decision per class</a></li>
<li><a href="#programme">Phasing, funding and refuelling</a></li>
<li><a href="#defaults">Defaults the run applied</a></li>
<li><a href="#charts">Charts</a></li>
<li><a href="#inputs">Inputs and assumptions</a></li>
<li><a href="#caveats">Caveats, limitations and safety</a></li>
<li><a href="#data">Data</a></li>
<li><a href="#sources">Sources of reference data</a></li>
<li><a href="#provenance">Software and inputs</a></li>
</ul></nav>
<h2 id="job">The question</h2>
{_job(result)}
<h2 id="results">Results side by side</h2>
<h3>Whole programme, fleet averages per km</h3>
<div class="scroll">{side}</div>
<h3>Per vehicle class</h3>
{per_class}
{_drive_html(result, "battery")}
{_drive_html(result, "fuel_cell")}
<h2 id="classes">A decision per class</h2>
{_decisions_html(result)}
<h2 id="programme">Phasing, funding and refuelling</h2>
{programme_html(result)}
<h2 id="defaults">Defaults the run applied</h2>
{_notices_html(result)}
{defaults_html(result)}
<h2 id="charts">Charts</h2>
{"".join(charts)}
<h2 id="inputs">Inputs and assumptions</h2>
<p>Every input of the study file as written; the file itself is attached under
<a href="#data">Data</a>.</p>
{_inputs(result)}
<h3>Duty profiles per class</h3>
<div class="scroll">{_table_html(reader_table("duty", result))}</div>
<h3>Assumptions</h3>
{assumptions}
<h2 id="caveats">Caveats, limitations and safety</h2>
{_caveats(result)}
<h2 id="data">Data</h2>
{_data(result, study_text)}
<h2 id="sources">Sources of reference data</h2>
{sources}
<h2 id="provenance">Software and inputs</h2>
{_key_value_table(versions, ("software", "version"))}
<p>SHA-256 of the study file: <code id="input-hash">{input_hash(study_text)}</code></p>
<p>Generated {generated}. Size of this file: about {_SIZE_MARK} MB.</p>
<script type="text/javascript">{_PRINT_JS}</script>
</body>
</html>
"""
    return doc.replace(_SIZE_MARK, f"{len(doc.encode('utf-8')) / 1e6:.1f}")


def write_report(
    result: StudyResult,
    path: str | os.PathLike[str],
    *,
    study_text: str,
    map_grid: MapSource | None = None,
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
    map_grid : MapGrid, EngineMap, mapping of them by vehicle class, or RunMap list, optional
        Efficiency map(s) for the operating-point charts (as :func:`html_report`).

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
    """Write the report of a study's result, with the efficiency maps its options run on.

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
    return write_report(result, path, study_text=study.to_toml(), map_grid=_maps(study))


def study_report_html(study: Study, result: StudyResult) -> str:
    """The report of a study's result as text (what :func:`write_study_report` writes).

    Parameters
    ----------
    study : Study
        The study that was run.
    result : StudyResult
        Its result.

    Returns
    -------
    str
        The HTML document.
    """
    return html_report(result, study_text=study.to_toml(), map_grid=_maps(study))


def _maps(study: Study) -> list[RunMap]:
    """Each map the study's options run its vehicle classes on (derived maps included)."""
    return run_maps(study.inputs)
