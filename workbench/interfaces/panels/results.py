"""Results panel: a summary table and the study's charts, side by side, redrawn in place.

Each chart sits in a :class:`FigurePane`, an Output widget made once, whose single output is
the chart as Plotly's JSON mimetype (drawn by the ``jupyterlab-plotly`` renderer that ships with
plotly, in JupyterLab and Voilà alike). After every good run
:func:`workbench.interfaces.charts.figure_dict` draws the new result as a plain figure dict
(no per-edit validation) into the same pane, so the numbers change where the user is
looking. (A ``FigureWidget`` updated in place lost updates now and then under Voilà,
and carries about 5 MB of JavaScript per widget; a pane carries the figure only.)
"""

from __future__ import annotations

import math
from typing import Any

import ipywidgets as widgets
import plotly.graph_objects as go
import plotly.io as pio

from workbench.interfaces import charts
from workbench.interfaces.panels.fields import esc
from workbench.interfaces.panels.state import StudyState
from workbench.interfaces.report import defaults_html
from workbench.interfaces.summary import best_mix_text, best_option, verdicts
from workbench.study.results import StudyResult, missing_reason, notice_lines

#: Charts the panel can show: chart key of :func:`charts.figure_dict` -> menu label.
CHARTS = {
    "cost_per_km": "Cost per km",
    "cash_flow": "Cumulative discounted cash flow (NPV)",
    "co2_per_km": "CO2 per km",
    "energy_density": "Energy density and tanks",
    "nox_monthly": "Tailpipe NOx as catalysts age",
    "tornado": "What moves the NPV (tornado)",
    "monte_carlo": "NPV over the Monte Carlo draws",
    "flame": "Flame temperature and thermal NO",
    "vehicles": "Fuel per 100 km across the vehicles",
}
#: Charts shown side by side when the panel opens.
DEFAULT_CHARTS = ("cost_per_km", "cash_flow")

#: Summary columns: candidates-table column -> (heading, format).
SUMMARY = {
    "fuel": ("fuel", "{}"),
    "cost_per_km": ("cost per km, year 1 [{cur}/km]", "{:.4f}"),
    "co2e_wtw_g_per_km": ("CO2e well-to-wheel [g/km]", "{:.0f}"),
    "nox_g_per_km": ("tailpipe NOx [g/km]", "{:.3f}"),
    "npv_vs_baseline": ("NPV vs baseline [{cur}]", "{:,.0f}"),
    "discounted_payback_years": ("discounted payback [year]", "{:.1f}"),
    "p_npv_positive": ("P(NPV > 0) [%]", "{:.0%}"),
}


class FigurePane(widgets.Output):
    """A Plotly chart shown in an Output widget, redrawn by replacing its one output.

    Parameters
    ----------
    figure : plotly.graph_objects.Figure or dict, optional
        The first chart to show.
    **kwargs
        Passed to :class:`ipywidgets.Output` (layout …).
    """

    def __init__(self, figure: go.Figure | dict[str, Any] | None = None,
                 **kwargs: object) -> None:
        super().__init__(**kwargs)
        self._shown: go.Figure | dict[str, Any] = {"data": [], "layout": {}}
        if figure is not None:
            self.show(figure)

    @property
    def figure(self) -> go.Figure:
        """The chart shown now, as a ``go.Figure`` (validated on first access, for tests and
        scripts; the redraw itself never validates)."""
        if isinstance(self._shown, dict):
            self._shown = go.Figure(self._shown)
        return self._shown

    def show(self, figure: go.Figure | dict[str, Any]) -> None:
        """Show ``figure`` in place of the chart shown before (one message to the page).

        A plain figure dict (:func:`workbench.interfaces.charts.figure_dict`) is sent as it is.
        """
        self._shown = figure
        fig_dict = figure if isinstance(figure, dict) else figure.to_dict()
        bundle = pio.renderers["plotly_mimetype"].to_mimebundle(dict(fig_dict))
        self.outputs = ({"output_type": "display_data", "data": bundle, "metadata": {}},)


def summary_html(result: StudyResult) -> str:
    """The candidates table as HTML: one row per option, the money and emission figures.

    Every cell carries ``data-candidate`` and ``data-column`` attributes so a test or a
    script can read a number; user text is escaped.
    """
    cur = esc(result.currency)
    pad = "padding:2px 10px;border-bottom:1px solid #ddd"
    head = "".join(f'<th style="{pad}">{h.format(cur=cur)}</th>' for h, _ in SUMMARY.values())
    rows = []
    for _, r in result.candidates.iterrows():
        cells = []
        for col, (_, fmt) in SUMMARY.items():
            value = r[col]
            missing = isinstance(value, float) and not math.isfinite(value)
            text = (missing_reason(r, col) or "–") if missing else fmt.format(value)
            cells.append(f'<td data-candidate="{esc(r["candidate"])}" data-column="{col}" '
                         f'style="text-align:right;{pad}">{esc(text)}</td>')
        rows.append(f'<tr><td style="{pad}"><span style="color:{esc(r["colour"])}">■</span> '
                    f'{esc(r["name"])}</td>{"".join(cells)}</tr>')
    return (f'<table class="wb-summary" style="font-size:13px;border-collapse:collapse">'
            f'<thead><tr><th style="{pad}">option</th>{head}</tr></thead>'
            f'<tbody>{"".join(rows)}</tbody></table>')


def _defaults(result: StudyResult | None) -> str:
    """Warnings in full, the defaults applied folded under one line (as in the report)."""
    if result is None:
        return ""
    body = defaults_html(result)
    n = len(result.defaults)
    mix = (f'<p class="wb-best-mix">{esc(best_mix_text(result))}</p>'
           if len(result.best_mix) else "")
    lines = mix + "".join(f'<p style="color:#D55E00">{esc(line)}</p>'
                          for line in notice_lines(result.notices))
    return (f'{lines}<details class="wb-defaults"><summary>{n} defaults applied '
            f"(values the study did not give)</summary>{body}</details>")


def verdict_html(result: StudyResult) -> str:
    """The answer first: one verdict per option, the same words as the report's summary.

    Each verdict is a ``<div class="wb-verdict" data-candidate=...>``; user text is escaped.
    """
    vs = verdicts(result)
    parts = [f"<p><b>{esc(best_option(result, vs))}</b></p>"]
    for v in vs:
        colour = "#a33a00" if v.raises_emissions else "inherit"
        parts.append(f'<div class="wb-verdict" data-candidate="{esc(v.candidate)}" '
                     f'style="margin:4px 0 8px"><b>{esc(v.name)}: {esc(v.word)}.</b> '
                     f"{esc(v.headline)} <span style='color:{colour}'>{esc(v.emissions)}"
                     f"</span> {esc(v.breakeven)}</div>")
    return "".join(parts)


class ChartSlot(widgets.VBox):
    """A chart menu above one :class:`FigurePane`; picking a chart redraws the same pane."""

    def __init__(self, state: StudyState, key: str) -> None:
        self.state = state
        self.choice = widgets.Dropdown(options=[(title, k) for k, title in CHARTS.items()],
                                       value=key, layout=widgets.Layout(width="360px"))
        result = state.result
        self.pane = FigurePane(charts.figure_dict(key, result) if result is not None else None)
        self.choice.observe(lambda _ch: self.draw(), names="value")
        super().__init__([self.choice, self.pane], layout=widgets.Layout(min_width="0"))

    @property
    def figure(self) -> go.Figure:
        """The chart shown now."""
        return self.pane.figure

    def draw(self) -> None:
        """Draw the chosen chart of the state's last good result (nothing before a run)."""
        if self.state.result is not None:
            self.pane.show(charts.figure_dict(self.choice.value, self.state.result))


class ResultsPanel(widgets.VBox):
    """The last good result: summary table and charts side by side, updated in place.

    Each chart slot has a menu of every chart of :data:`CHARTS`, so two slots side by side
    can show any pair.

    Parameters
    ----------
    state : StudyState
        The shared state.
    charts : tuple of str
        Chart keys of the slots, left to right then down.

    Attributes
    ----------
    slots : list of ChartSlot
        The chart slots.
    summary : ipywidgets.HTML
        The summary table.
    verdict : ipywidgets.HTML
        The verdicts in words (the app shows it on top).
    defaults : ipywidgets.HTML
        The best mix by class, the one-line warnings and the defaults the run applied.
    """

    def __init__(self, state: StudyState, *, charts: tuple[str, ...] = DEFAULT_CHARTS) -> None:
        self.state = state
        self.summary = widgets.HTML(summary_html(state.result) if state.result else "")
        self.defaults = widgets.HTML(_defaults(state.result))
        self.verdict = widgets.HTML(verdict_html(state.result) if state.result else "")
        self.slots = [ChartSlot(state, key) for key in charts]
        grid = widgets.GridBox(self.slots, layout=widgets.Layout(
            grid_template_columns="repeat(2, minmax(0, 1fr))", grid_gap="8px", width="100%"))
        state.on_change(self.show)
        super().__init__([widgets.HTML("<h3>Results</h3>"), self.summary, self.defaults, grid])

    def figure(self, key: str) -> go.Figure | None:
        """The widget showing chart ``key``, or None when no slot shows it."""
        return next((s.figure for s in self.slots if s.choice.value == key), None)

    def show(self, state: StudyState) -> None:
        """Draw the state's last good result (nothing before the first run)."""
        if state.result is None:
            return
        self.summary.value = summary_html(state.result)
        self.defaults.value = _defaults(state.result)
        self.verdict.value = verdict_html(state.result)
        for slot in self.slots:
            slot.draw()
