"""Results panel: a summary table and the study's charts, side by side, updated in place.

Each chart is a :class:`plotly.graph_objects.FigureWidget` made once; after every good run the
chart builders of :mod:`workbench.charts` draw the new result and :func:`refresh_figure` copies
it into the same widget, so the numbers change where the user is looking.
"""

from __future__ import annotations

import math

import ipywidgets as widgets
import plotly.graph_objects as go

from workbench import charts
from workbench.panels.fields import esc
from workbench.panels.state import StudyState
from workbench.results import StudyResult

#: Charts the panel can show, by chart key: (menu label, builder).
CHARTS = {
    "cost_per_km": ("Cost per km", charts.cost_per_km_chart),
    "cash_flow": ("Cumulative discounted cash flow (NPV)", charts.cash_flow_chart),
    "co2_per_km": ("CO2 per km", charts.co2_per_km_chart),
    "energy_density": ("Energy density and tanks", charts.energy_density_chart),
    "nox_monthly": ("Tailpipe NOx as catalysts age", charts.nox_monthly_chart),
    "tornado": ("What moves the NPV (tornado)", charts.tornado_chart),
    "monte_carlo": ("NPV over the Monte Carlo draws", charts.monte_carlo_chart),
    "flame": ("Flame temperature and thermal NO", charts.flame_chart),
}
#: Charts shown side by side when the panel opens.
DEFAULT_CHARTS = ("cost_per_km", "cash_flow")

#: Summary columns: candidates-table column -> (heading, format).
SUMMARY = {
    "fuel": ("fuel", "{}"),
    "cost_per_km": ("cost per km [{cur}/km]", "{:.4f}"),
    "co2e_wtw_g_per_km": ("CO2e well-to-wheel [g/km]", "{:.0f}"),
    "nox_g_per_km": ("tailpipe NOx [g/km]", "{:.3f}"),
    "npv_vs_baseline": ("NPV vs baseline [{cur}]", "{:,.0f}"),
    "discounted_payback_years": ("discounted payback [year]", "{:.1f}"),
    "p_npv_positive": ("P(NPV > 0) [%]", "{:.0%}"),
}


def refresh_figure(widget: go.FigureWidget, figure: go.Figure) -> None:
    """Replace the traces and layout of a FigureWidget with those of a figure, in place.

    Only for a widget already on screen: the browser gets the change as messages to the
    views it has. A widget is made with its first figure (``go.FigureWidget(figure)``),
    because a view made after such messages starts from the widget's first state.

    Parameters
    ----------
    widget : plotly.graph_objects.FigureWidget
        The widget on screen (kept: same object, same model in the browser).
    figure : plotly.graph_objects.Figure
        The freshly built chart.
    """
    widget.layout = figure.layout
    widget.data = ()
    widget.add_traces(list(figure.data))


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
            text = "–" if missing else fmt.format(value)
            cells.append(f'<td data-candidate="{esc(r["candidate"])}" data-column="{col}" '
                         f'style="text-align:right;{pad}">{esc(text)}</td>')
        rows.append(f'<tr><td style="{pad}"><span style="color:{esc(r["colour"])}">■</span> '
                    f'{esc(r["name"])}</td>{"".join(cells)}</tr>')
    return (f'<table class="wb-summary" style="font-size:13px;border-collapse:collapse">'
            f'<thead><tr><th style="{pad}">option</th>{head}</tr></thead>'
            f'<tbody>{"".join(rows)}</tbody></table>')


class ChartSlot(widgets.VBox):
    """A chart menu above one FigureWidget; picking a chart redraws the same widget."""

    def __init__(self, state: StudyState, key: str) -> None:
        self.state = state
        self.choice = widgets.Dropdown(options=[(title, k) for k, (title, _) in CHARTS.items()],
                                       value=key, layout=widgets.Layout(width="360px"))
        result = state.result
        self.figure = go.FigureWidget(CHARTS[key][1](result) if result is not None else None)
        self.choice.observe(lambda _ch: self.draw(), names="value")
        super().__init__([self.choice, self.figure], layout=widgets.Layout(min_width="0"))

    def draw(self) -> None:
        """Draw the chosen chart of the state's last good result (nothing before a run)."""
        if self.state.result is not None:
            refresh_figure(self.figure, CHARTS[self.choice.value][1](self.state.result))


class ResultsPanel(widgets.VBox):
    """The last good result: summary table and charts side by side, updated in place.

    Each chart slot has a menu of every chart of :data:`CHARTS`. The number of slots is kept
    small on purpose: a FigureWidget carries plotly.js in its module (about 5 MB), and
    anywidget gives a page 2 s to set up each model, which about ten FigureWidgets on one
    page exceed on a 2-core machine (some charts then stay blank in Voilà).

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
    """

    def __init__(self, state: StudyState, *, charts: tuple[str, ...] = DEFAULT_CHARTS) -> None:
        self.state = state
        self.summary = widgets.HTML(summary_html(state.result) if state.result else "")
        self.slots = [ChartSlot(state, key) for key in charts]
        grid = widgets.GridBox(self.slots, layout=widgets.Layout(
            grid_template_columns="repeat(2, minmax(0, 1fr))", grid_gap="8px", width="100%"))
        state.on_change(self.show)
        super().__init__([widgets.HTML("<h3>Results</h3>"), self.summary, grid])

    def figure(self, key: str) -> go.FigureWidget | None:
        """The widget showing chart ``key``, or None when no slot shows it."""
        return next((s.figure for s in self.slots if s.choice.value == key), None)

    def show(self, state: StudyState) -> None:
        """Draw the state's last good result (nothing before the first run)."""
        if state.result is None:
            return
        self.summary.value = summary_html(state.result)
        for slot in self.slots:
            slot.draw()
