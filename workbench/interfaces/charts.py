"""Plotly charts of a study result: one builder per chart, each returning a ``go.Figure``.

Each chart is drawn once as a plain Plotly figure dict (traces and layout as dicts, one shared
template, subplot grids made once per shape): :func:`figure_dict` returns it unvalidated for the
panels, which redraw after every edit; the public ``*_chart`` builders validate it once into a
``go.Figure`` for the report, notebooks and tests. Both are the same figure.

Every builder reads the tidy tables of a :class:`~workbench.study.results.StudyResult`
and draws them;
none of them computes physics or money (paybacks and percentiles come from the tables too).
Common rules:

* every numeric axis title carries its unit in brackets, money in ``result.currency``;
* a candidate keeps the colour of :meth:`StudyResult.colours` in every chart, and all of its
  traces share the legend group ``"candidate:<id>"``, so one legend click hides it in every
  facet; components that colour cannot tell apart (cost parts, well-to-wheel) get a fill
  pattern, explained by grey legend keys;
* every piece of user text (candidate names, vehicle classes, fuels, inputs, currency) is
  HTML-escaped before it reaches a Plotly string, so markup in a name shows as text;
* hover text gives each value with its unit.

:func:`all_figures` builds the full set for the report and the results panel.
"""

from __future__ import annotations

import copy
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, TypeAlias

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import plotly.io as pio
from plotly.subplots import make_subplots

from workbench.core.cache import memoize
from workbench.core.constants import to_rpm
from workbench.core.text import escape_html
from workbench.study.results import RunMap, StudyResult

if TYPE_CHECKING:
    from workbench.models.engine import EngineMap

#: Plotly template of every chart.
TEMPLATE = "plotly_white"

#: Fill pattern of each cost component (solid, hatched, dotted) in the cost-per-km chart.
COST_PATTERNS = {"fuel": "", "upkeep": "/", "capital": "."}

#: Colour of a candidate that the candidates table does not list (a bug upstream).
NEUTRAL = "#AAAAAA"
#: Colour of the break-even line (NPV 0) in the Monte Carlo chart: the palette's vermilion.
BREAK_EVEN = "#D55E00"


def escape(text: object) -> str:
    """User text made safe for any Plotly string: ``<``, ``>`` and ``&`` become entities.

    Plotly renders text as a small subset of HTML and turns ``&lt;`` ``&gt;`` ``&amp;`` back
    into characters, so the text shows as typed. Quotes are left alone because Plotly does
    not decode ``&quot;`` and shows it literally; outside a tag they are harmless.
    """
    return escape_html(text, quote=False)


@dataclass(frozen=True)
class MapGrid:
    """A brake-efficiency map on a grid, in the units charts show.

    Parameters
    ----------
    speed_rpm : numpy.ndarray
        Engine-speed axis [rpm].
    torque_nm : numpy.ndarray
        Torque axis [N m].
    efficiency : numpy.ndarray
        Brake efficiency, shape ``(len(torque_nm), len(speed_rpm))`` [-].
    full_load_torque_nm : numpy.ndarray or None
        Full-load torque at each speed of the axis [N m], drawn as a line when given.
    name : str
        Label of the map (user text; escaped when drawn).
    """

    speed_rpm: np.ndarray
    torque_nm: np.ndarray
    efficiency: np.ndarray
    full_load_torque_nm: np.ndarray | None = None
    name: str = ""

    @classmethod
    def from_engine_map(cls, engine_map: EngineMap) -> MapGrid:
        """The grid of a :class:`workbench.models.engine.EngineMap`, speed in rpm."""
        return cls(speed_rpm=to_rpm(np.asarray(engine_map.speed)),
                   torque_nm=np.asarray(engine_map.torque),
                   efficiency=np.asarray(engine_map.efficiency),
                   full_load_torque_nm=np.asarray(engine_map.full_load_torque),
                   name=engine_map.name)


# ----------------------------------------------------------------------------- figures as dicts


@memoize(maxsize=None, kind="resource")
def _template() -> dict[str, Any]:
    """The layout template of every chart as a plain dict, built once and shared (read-only)."""
    return pio.templates[TEMPLATE].to_plotly_json()


@memoize(maxsize=64, kind="resource")
def _grid_layout(rows: int, cols: int, options: tuple[tuple[str, Any], ...]) -> dict[str, Any]:
    """The layout Plotly's ``make_subplots`` makes for a grid (axes, domains, facet titles)."""
    layout = make_subplots(rows=rows, cols=cols, **dict(options)).to_dict()["layout"]
    layout.pop("template", None)
    return layout


def _merge(target: dict[str, Any], changes: Mapping[str, Any]) -> None:
    """Update nested dicts in place, as ``go.Figure.update_layout`` does."""
    for key, value in changes.items():
        if isinstance(value, Mapping) and isinstance(target.get(key), dict):
            _merge(target[key], value)
        else:
            target[key] = dict(value) if isinstance(value, Mapping) else value


def _ref(letter: str, n: int) -> str:
    """Plotly's reference of the n-th axis (1-based): ``x``, ``x2`` ..."""
    return letter if n == 1 else f"{letter}{n}"


class _Fig:
    """A figure being drawn as plain dicts: the part of ``go.Figure``'s API the builders use.

    Parameters
    ----------
    rows, cols : int
        Subplot grid; a grid other than 1 x 1 takes its axes from ``make_subplots``.
    **grid
        Options of ``make_subplots`` (hashable values).
    """

    def __init__(self, rows: int = 1, cols: int = 1, **grid: Any) -> None:
        self.cols = cols
        self.subplots = bool(grid) or (rows, cols) != (1, 1)
        self.data: list[dict[str, Any]] = []
        self.layout: dict[str, Any] = (
            copy.deepcopy(_grid_layout(rows, cols, tuple(sorted(grid.items()))))
            if self.subplots else {})

    def _cell(self, row: int, col: int) -> int:
        return (row - 1) * self.cols + col

    def add_trace(self, trace: dict[str, Any], row: int | None = None,
                  col: int | None = None) -> None:
        """Add a trace dict, in the facet (row, col) when given."""
        if row is not None and col is not None:
            n = self._cell(row, col)
            trace = {**trace, "xaxis": _ref("x", n), "yaxis": _ref("y", n)}
        self.data.append(trace)

    def update_layout(self, **changes: Any) -> None:
        """Merge ``changes`` into the layout."""
        _merge(self.layout, changes)

    def _update_axes(self, letter: str, row: int | None, col: int | None,
                     changes: Mapping[str, Any]) -> None:
        if row is not None and col is not None:
            n = self._cell(row, col)
            names = [f"{letter}axis{n if n > 1 else ''}"]
        else:
            names = [k for k in self.layout if k.startswith(f"{letter}axis")] or [
                f"{letter}axis"]
        for name in names:
            _merge(self.layout.setdefault(name, {}), changes)

    def update_xaxes(self, row: int | None = None, col: int | None = None,
                     **changes: Any) -> None:
        """Merge ``changes`` into the x axis of a facet, or into every x axis."""
        self._update_axes("x", row, col, changes)

    def update_yaxes(self, row: int | None = None, col: int | None = None,
                     **changes: Any) -> None:
        """Merge ``changes`` into the y axis of a facet, or into every y axis."""
        self._update_axes("y", row, col, changes)

    def add_annotation(self, **annotation: Any) -> None:
        """Add an annotation dict."""
        self.layout.setdefault("annotations", []).append(annotation)

    def add_hline(self, y: float, line: dict[str, Any]) -> None:
        """A horizontal line across the plot at ``y``."""
        self.layout.setdefault("shapes", []).append(dict(
            type="line", line=line, x0=0, x1=1, xref="x domain", y0=y, y1=y, yref="y"))

    def add_vline(self, x: float, line: dict[str, Any], row: int = 1, col: int = 1, *,
                  label: str | None = None, font_size: int = 11, side: str = "right",
                  height: float = 1.0) -> None:
        """A vertical line up a facet at ``x``, optionally labelled near its top.

        ``side`` is where the label sits: ``"right"`` of the line or ``"left"`` of it;
        ``height`` is where its top edge sits, as a share of the facet's height.
        """
        n = self._cell(row, col)
        xref, yref = _ref("x", n), f"{_ref('y', n)} domain"
        self.layout.setdefault("shapes", []).append(dict(
            type="line", line=line, x0=x, x1=x, xref=xref, y0=0, y1=1, yref=yref))
        if label is not None:
            self.add_annotation(text=label, font=dict(size=font_size), showarrow=False, x=x,
                                xanchor="left" if side == "right" else "right", xref=xref,
                                y=height, yanchor="top", yref=yref,
                                bgcolor="rgba(255,255,255,0.8)")

    def to_dict(self) -> dict[str, Any]:
        """The figure dict (shares the template; do not edit it)."""
        return {"data": self.data, "layout": self.layout}

    def figure(self) -> go.Figure:
        """The figure validated into a ``go.Figure``."""
        return go.Figure(self.to_dict())


def _bar(**props: Any) -> dict[str, Any]:
    return {"type": "bar", **props}


def _scatter(**props: Any) -> dict[str, Any]:
    return {"type": "scatter", **props}


def _values(column: pd.Series) -> np.ndarray:
    """A table column as the array a trace carries."""
    return column.to_numpy()


# ----------------------------------------------------------------------------- shared helpers


@dataclass(frozen=True)
class _Style:
    """Display name and colour of each candidate id, and the escaped currency."""

    names: dict[str, str]
    colours: dict[str, str]
    currency: str

    def name(self, candidate: str) -> str:
        return escape(self.names.get(candidate, candidate))

    def colour(self, candidate: str) -> str:
        return self.colours.get(candidate, NEUTRAL)

    def order(self, table: pd.DataFrame | Iterable[str]) -> list[str]:
        """Candidates present in ``table`` (or in a list of ids), in the order of the
        candidates table."""
        return _order(self.names, table)


def _order(names: Iterable[str], table: pd.DataFrame | Iterable[str]) -> list[str]:
    """Candidates present in ``table`` (a table or candidate ids): those of ``names`` in its
    order, then any others."""
    present = set(table["candidate"] if isinstance(table, pd.DataFrame) else table)
    known = [c for c in names if c in present]
    return known + sorted(present.difference(known), key=str)


def _style(result: StudyResult) -> _Style:
    names = dict(zip(result.candidates["candidate"], result.candidates["name"], strict=True))
    return _Style(names=names, colours=result.colours(), currency=escape(result.currency))


def _group(candidate: str) -> str:
    """Legend group of a candidate's traces."""
    return "candidate:" + escape(candidate)


def _legend_key(name: str, *, pattern: str | None = None,
                symbol: str | None = None) -> dict[str, Any]:
    """An empty trace that only explains a fill pattern or a marker symbol in the legend.

    Keys are white with black lines, so they cannot be mistaken for a candidate's colour.
    """
    common = dict(name=name, legendgroup="key:" + name, hoverinfo="skip", showlegend=True)
    if pattern is not None:
        return _bar(x=[None], y=[None], marker=dict(
            color="white", line=dict(color="black", width=1),
            pattern=dict(shape=pattern, fgcolor="black", fillmode="overlay", solidity=0.3)),
            **common)
    # an open symbol is drawn in its marker colour: black, or it would vanish on white
    fill = "black" if symbol and symbol.endswith("-open") else "white"
    return _scatter(x=[None], y=[None], mode="markers", marker=dict(
        symbol=symbol, size=11, color=fill, line=dict(color="black", width=1.5)), **common)


def _pattern(shape: str) -> dict[str, object]:
    """Fill pattern drawn in white over a candidate's colour."""
    return dict(shape=shape, fgcolor="white", fillmode="overlay", solidity=0.4)


def _finish(fig: _Fig, title: str, *, height: int) -> _Fig:
    fig.update_layout(template=_template(), title=dict(text=title, x=0.0, xanchor="left"),
                      height=height, hoverlabel=dict(namelength=-1),
                      legend=dict(groupclick="togglegroup"),
                      margin=dict(l=70, r=30, t=80, b=60))
    return fig


def _no_data(title: str, table: str) -> _Fig:
    fig = _Fig()
    fig.add_annotation(text=f"The study produced no rows in the {table} table.",
                       showarrow=False, x=0.5, y=0.5, xref="paper", yref="paper")
    fig.update_xaxes(visible=False)
    fig.update_yaxes(visible=False)
    return _finish(fig, title, height=240)


def _facet_titles(classes: Iterable[str], result: StudyResult) -> tuple[str, ...]:
    """Facet titles: each vehicle class by its name in the study, escaped."""
    return tuple(escape(result.names.vehicle_class(c)) for c in classes)


# ----------------------------------------------------------------------------- cost and CO2


def _class_facets(table: pd.DataFrame, result: StudyResult
                  ) -> tuple[dict[str, dict[str, dict]], _Fig]:
    """Rows of a per-km table by vehicle class and candidate (first row of each kept), and
    a figure with one panel per class."""
    by_class: dict[str, dict[str, dict]] = {}
    for row in table.to_dict("records"):
        by_class.setdefault(row["vehicle_class"], {}).setdefault(row["candidate"], row)
    fig = _Fig(rows=1, cols=len(by_class), shared_yaxes=True,
               subplot_titles=_facet_titles(by_class, result), horizontal_spacing=0.04)
    return by_class, fig


def _cost_per_km(result: StudyResult) -> _Fig:
    title = "Cost per km by part"
    table = result.per_km
    if table.empty:
        return _no_data(title, "per_km")
    st = _style(result)
    by_class, fig = _class_facets(table, result)
    parts = {"fuel": "cost_fuel_per_km", "upkeep": "cost_upkeep_per_km",
             "capital": "cost_capital_per_km"}
    shown: set[str] = set()
    for col, rows in enumerate(by_class.values(), start=1):
        for cand in st.order(rows):
            row = rows[cand]
            for part, column in parts.items():
                fig.add_trace(_bar(
                    x=[st.name(cand)], y=[row[column]], name=st.name(cand),
                    legendgroup=_group(cand), showlegend=cand not in shown,
                    marker=dict(color=st.colour(cand), pattern=_pattern(COST_PATTERNS[part])),
                    customdata=[[row["cost_per_km"]]],
                    hovertemplate=(f"{part}: %{{y:.4f}} {st.currency}/km<br>"
                                   f"total: %{{customdata[0]:.4f}} {st.currency}/km"),
                ), row=1, col=col)
                shown.add(cand)
    for (part, shape), look in zip(COST_PATTERNS.items(), ("solid", "hatched", "dotted"),
                                   strict=True):
        fig.add_trace(_legend_key(f"{part}: {look}", pattern=shape))
    fig.update_layout(barmode="stack")
    fig.update_yaxes(title=dict(text=f"cost per km, year 1 [{st.currency}/km]"), row=1, col=1)
    return _finish(fig, title, height=460)


def cost_per_km_chart(result: StudyResult) -> go.Figure:
    """Cost per km of each candidate, stacked by fuel, upkeep and capital, one facet per class.

    Parameters
    ----------
    result : StudyResult
        Reads the ``per_km`` table (``cost_fuel_per_km``, ``cost_upkeep_per_km``,
        ``cost_capital_per_km`` [currency/km]).

    Returns
    -------
    plotly.graph_objects.Figure
    """
    return _cost_per_km(result).figure()


def _co2_per_km(result: StudyResult) -> _Fig:
    title = "CO2 per km: tank-to-wheel and well-to-wheel"
    table = result.per_km
    if table.empty:
        return _no_data(title, "per_km")
    st = _style(result)
    by_class, fig = _class_facets(table, result)
    kinds = {"tank-to-wheel CO2": ("co2_ttw_g_per_km", ""),
             "well-to-wheel CO2e": ("co2e_wtw_g_per_km", "/")}
    shown: set[str] = set()
    for col, rows in enumerate(by_class.values(), start=1):
        for cand in st.order(rows):
            for kind, (column, shape) in kinds.items():
                fig.add_trace(_bar(
                    x=[st.name(cand)], y=[rows[cand][column]], name=st.name(cand),
                    legendgroup=_group(cand), showlegend=cand not in shown, offsetgroup=kind,
                    marker=dict(color=st.colour(cand), pattern=_pattern(shape)),
                    hovertemplate=f"{kind}: %{{y:.1f}} g/km",
                ), row=1, col=col)
                shown.add(cand)
    for kind, (_, shape) in kinds.items():
        fig.add_trace(_legend_key(kind, pattern=shape))
    fig.update_layout(barmode="group")
    fig.update_yaxes(title=dict(text="CO2 per km [g/km]"), rangemode="tozero", row=1, col=1)
    return _finish(fig, title, height=460)


def co2_per_km_chart(result: StudyResult) -> go.Figure:
    """Tank-to-wheel CO2 and well-to-wheel CO2e per km, side by side, one facet per class.

    Parameters
    ----------
    result : StudyResult
        Reads the ``per_km`` table (``co2_ttw_g_per_km``, ``co2e_wtw_g_per_km`` [g/km]).

    Returns
    -------
    plotly.graph_objects.Figure
        Solid bars tank-to-wheel, hatched bars well-to-wheel.
    """
    return _co2_per_km(result).figure()


# ----------------------------------------------------------------------------- NOx over time


def _nox_monthly(result: StudyResult) -> _Fig:
    title = "Tailpipe NOx over the programme"
    table = result.nox_monthly
    if table.empty:
        return _no_data(title, "nox_monthly")
    st = _style(result)
    classes = list(dict.fromkeys(table["vehicle_class"]))
    fig = _Fig(rows=len(classes), cols=1, shared_xaxes=True,
               subplot_titles=_facet_titles(classes, result), vertical_spacing=0.08)
    shown: set[str] = set()
    for r, vclass in enumerate(classes, start=1):
        rows = table[table["vehicle_class"] == vclass]
        for cand in st.order(rows):
            d = rows[rows["candidate"] == cand].sort_values("month")
            common = dict(name=st.name(cand), legendgroup=_group(cand))
            fig.add_trace(_scatter(
                x=_values(d["month"]), y=_values(d["nox_g_per_km"]), mode="lines",
                showlegend=cand not in shown, line=dict(color=st.colour(cand), width=2),
                customdata=_values(d["catalyst_efficiency"]),
                hovertemplate=("month %{x}: %{y:.4f} g/km NOx<br>"
                               "catalyst conversion %{customdata:.1%}"), **common,
            ), row=r, col=1)
            shown.add(cand)
            rep = d[d["replaced"].astype(bool)]
            fig.add_trace(_scatter(
                x=_values(rep["month"]), y=_values(rep["nox_g_per_km"]), mode="markers",
                showlegend=False,
                marker=dict(symbol="diamond", size=10, color=st.colour(cand),
                            line=dict(color="black", width=1)),
                hovertemplate="catalyst replaced in month %{x}: %{y:.4f} g/km NOx", **common,
            ), row=r, col=1)
        fig.update_yaxes(title=dict(text="tailpipe NOx [g/km]"), rangemode="tozero",
                         row=r, col=1)
    fig.add_trace(_legend_key("catalyst replaced", symbol="diamond"))
    fig.update_xaxes(title=dict(text="month of the programme [month]"), row=len(classes),
                     col=1)
    return _finish(fig, title, height=160 + 260 * len(classes))


def nox_monthly_chart(result: StudyResult) -> go.Figure:
    """Tailpipe NOx per km month by month as catalysts age, with replacements marked.

    Parameters
    ----------
    result : StudyResult
        Reads the ``nox_monthly`` table (``nox_g_per_km`` [g/km], ``catalyst_efficiency`` [-],
        ``replaced`` [bool]); one row of facets per vehicle class.

    Returns
    -------
    plotly.graph_objects.Figure
        A line per candidate; a diamond where ``replaced`` is true.
    """
    return _nox_monthly(result).figure()


# ----------------------------------------------------------------------------- storage


def _energy_density(result: StudyResult) -> _Fig:
    title = "Energy density: fuel alone and with its tank system"
    table = result.storage
    if table.empty:
        return _no_data(title, "storage")
    st = _style(result)
    fig = _Fig()
    drawn: set[str] = set()
    for cand in st.order(table):
        # one line per fuel, drawn by the first option that burns it (the baseline first, then
        # the candidate that brings it in), named by the fuel; the tank system depends on the
        # class only through its range, so the first class using the fuel stands for it
        rows = table[(table["candidate"] == cand) & ~table["fuel"].isin(drawn)]
        for row in rows.drop_duplicates("fuel").to_dict("records"):
            drawn.add(row["fuel"])
            fig.add_trace(_density_trace(st, cand, row, result.names.fuel(row["fuel"])))
    fig.add_trace(_legend_key("fuel alone", symbol="circle"))
    fig.add_trace(_legend_key("tank system", symbol="diamond-open"))
    fig.update_xaxes(title=dict(text="energy per mass, LHV [MJ/kg]"), rangemode="tozero")
    fig.update_yaxes(title=dict(text="energy per volume, LHV [MJ/L]"), rangemode="tozero")
    return _finish(fig, title, height=480)


def energy_density_chart(result: StudyResult) -> go.Figure:
    """Energy per kg against energy per litre: the fuel alone and with its tank system.

    Parameters
    ----------
    result : StudyResult
        Reads the ``storage`` table (``energy_density_mj_per_kg``, ``energy_density_mj_per_l``,
        ``system_energy_density_mj_per_kg``, ``system_energy_density_mj_per_l``).

    Returns
    -------
    plotly.graph_objects.Figure
        Per candidate a filled circle (fuel alone) joined to an open diamond (tank system).
    """
    return _energy_density(result).figure()


def _density_trace(st: _Style, cand: str, row: Mapping[str, Any], fuel_name: str
                   ) -> dict[str, Any]:
    fuel = escape(fuel_name)
    return _scatter(
            x=[row["energy_density_mj_per_kg"], row["system_energy_density_mj_per_kg"]],
            y=[row["energy_density_mj_per_l"], row["system_energy_density_mj_per_l"]],
            mode="lines+markers", name=fuel, legendgroup=_group(cand),
            line=dict(color=st.colour(cand), dash="dot", width=1.5),
            marker=dict(symbol=["circle", "diamond-open"], size=13, color=st.colour(cand),
                        line=dict(width=2, color=st.colour(cand))),
            customdata=[f"{fuel}, fuel alone ({st.name(cand)})",
                        f"{fuel}, tank system ({st.name(cand)})"],
            hovertemplate="%{customdata}<br>%{x:.2f} MJ/kg, %{y:.2f} MJ/L",
        )


# ----------------------------------------------------------------------------- money


def _cash_flow(result: StudyResult) -> _Fig:
    title = "Cumulative discounted cash flow against the baseline"
    table = result.cash_flows
    if table.empty:
        return _no_data(title, "cash_flows")
    st = _style(result)
    cands = {r["candidate"]: r for r in result.candidates.to_dict("records")}
    ids, years = _values(table["candidate"]), _values(table["year"])
    cumulative = _values(table["cumulative_discounted_vs_baseline"])
    fig = _Fig()
    for cand in st.order(table):
        if cand in cands and bool(cands[cand]["is_baseline"]):
            continue
        rows = np.flatnonzero(ids == cand)
        rows = rows[np.argsort(years[rows], kind="stable")]
        common = dict(name=st.name(cand), legendgroup=_group(cand))
        fig.add_trace(_scatter(
            x=years[rows], y=cumulative[rows],
            mode="lines+markers", line=dict(color=st.colour(cand), width=2),
            marker=dict(size=5),
            hovertemplate=f"year %{{x}}: %{{y:,.0f}} {st.currency}", **common))
        payback = cands[cand]["discounted_payback_years"] if cand in cands else np.nan
        if np.isfinite(payback):  # counted from the conversion year, the table's first
            fig.add_trace(_scatter(
                x=[years[rows[0]] + payback], y=[0.0], mode="markers", showlegend=False,
                marker=dict(symbol="star", size=16, color=st.colour(cand),
                            line=dict(color="black", width=1)),
                customdata=[payback],
                hovertemplate="discounted payback after %{customdata:.1f} years", **common))
    fig.add_hline(y=0.0, line=dict(color="black", width=1))
    fig.add_trace(_legend_key("discounted payback", symbol="star"))
    fig.update_xaxes(title=dict(text="year of the programme [year]"))
    fig.update_yaxes(title=dict(
        text=f"cumulative discounted cash flow vs baseline [{st.currency}]"), tickformat=",.0f")
    return _finish(fig, title, height=480)


def cash_flow_chart(result: StudyResult) -> go.Figure:
    """Cumulative discounted cash flow of each candidate against the baseline, payback marked.

    Parameters
    ----------
    result : StudyResult
        Reads ``cash_flows`` (``cumulative_discounted_vs_baseline`` [currency]) and the
        candidates' ``discounted_payback_years`` [year]; the baseline is left out.

    Returns
    -------
    plotly.graph_objects.Figure
        A line per candidate; a star on the zero line at its discounted payback, if any.
    """
    return _cash_flow(result).figure()


def _tornado(result: StudyResult) -> _Fig:
    title = "What moves the NPV: one input at a time"
    table = result.tornado
    if table.empty:
        return _no_data(title, "tornado")
    st = _style(result)
    npv = result.candidates.set_index("candidate")["npv_vs_baseline"]
    cands = st.order(table)
    sizes = tuple(int((table["candidate"] == c).sum()) for c in cands)
    fig = _Fig(rows=len(cands), cols=1, shared_xaxes=True, row_heights=sizes,
               subplot_titles=tuple(st.name(c) for c in cands), vertical_spacing=0.1)
    ends = {"low": ("npv_at_low", "low_value", ""), "high": ("npv_at_high", "high_value", "/")}
    for r, cand in enumerate(cands, start=1):
        d = table[table["candidate"] == cand].sort_values("swing")
        base = float(npv.get(cand, 0.0))
        inputs = [escape(f"{lab} [{unit}]" if unit else lab)
                  for lab, unit in zip(d["label"], d["unit"], strict=True)]
        for end, (npv_col, value_col, shape) in ends.items():
            fig.add_trace(_bar(
                y=inputs, x=_values(d[npv_col] - base), base=base, orientation="h",
                name=st.name(cand), legendgroup=_group(cand), showlegend=False,
                marker=dict(color=st.colour(cand), pattern=_pattern(shape)),
                text=[f"{v:,.3g}" for v in d[value_col]], textposition="auto",
                customdata=np.column_stack([d[value_col], d[npv_col]]),
                hovertemplate=(f"%{{y}} at its {end} value %{{customdata[0]:.4g}}:<br>"
                               f"NPV %{{customdata[1]:,.0f}} {st.currency}"),
            ), row=r, col=1)
        fig.add_vline(x=base, line=dict(color="black", width=1), row=r, col=1)
    for end, (_, _, shape) in ends.items():
        fig.add_trace(_legend_key(f"input at its {end} value", pattern=shape))
    fig.update_layout(barmode="overlay")
    fig.update_xaxes(title=dict(text=f"NPV vs baseline [{st.currency}]"), tickformat=",.0f",
                     row=len(cands), col=1)
    return _finish(fig, title, height=140 + 34 * sum(sizes) + 60 * len(cands))


def tornado_chart(result: StudyResult) -> go.Figure:
    """One-at-a-time sensitivity of NPV: a tornado per candidate, widest swing on top.

    Parameters
    ----------
    result : StudyResult
        Reads ``tornado`` (``label``, ``unit``, ``low_value``, ``high_value``,
        ``npv_at_low``, ``npv_at_high`` [currency]) and the candidates' ``npv_vs_baseline``
        [currency], where each bar starts.

    Returns
    -------
    plotly.graph_objects.Figure
        Solid bars: input at its low value; hatched: at its high value; each bar is
        labelled with the input's value.
    """
    return _tornado(result).figure()


#: Bins of each candidate's NPV histogram (equal widths over its draws' range).
MC_BINS = 40


def _monte_carlo(result: StudyResult) -> _Fig:
    title = "NPV against the baseline over the Monte Carlo draws"
    table = result.monte_carlo
    if table.empty:
        return _no_data(title, "monte_carlo")
    st = _style(result)
    cands_table = result.candidates.set_index("candidate")
    cands = st.order(table)
    fig = _Fig(rows=len(cands), cols=1, shared_xaxes=True,
               subplot_titles=tuple(st.name(c) for c in cands), vertical_spacing=0.1)
    # labels at three heights, so that close percentiles never print over each other
    lines = {"P10": ("npv_p10", "dot", "left", 1.0), "P50": ("npv_p50", "solid", "right", 0.86),
             "P90": ("npv_p90", "dash", "right", 0.72)}
    for r, cand in enumerate(cands, start=1):
        d = table[table["candidate"] == cand]
        # binned here, not by plotly.js: the page carries 40 bars, not every draw
        counts, edges = np.histogram(_values(d["npv_vs_baseline"]), bins=MC_BINS)
        fig.add_trace(dict(
            type="bar", x=(edges[:-1] + edges[1:]) / 2, y=100.0 * counts / counts.sum(),
            width=np.diff(edges), customdata=np.column_stack([edges[:-1], edges[1:]]),
            name=st.name(cand), legendgroup=_group(cand), marker=dict(color=st.colour(cand)),
            hovertemplate=(f"NPV %{{customdata[0]:,.0f}} to %{{customdata[1]:,.0f}} "
                           f"{st.currency}: %{{y:.1f}} % of draws")), row=r, col=1)
        for label, (column, dash, side, height) in lines.items():
            value = cands_table.loc[cand, column] if cand in cands_table.index else np.nan
            if np.isfinite(value):
                fig.add_vline(x=value, line=dict(color="black", width=1.5, dash=dash),
                              label=f"{label} {value:,.0f}", side=side, row=r, col=1,
                              height=height)
        fig.add_vline(x=0.0, line=dict(color=BREAK_EVEN, width=2), row=r, col=1,
                      label="break-even (NPV 0)", side="left", height=0.58)
        fig.update_yaxes(title=dict(text="share of draws [%]"), row=r, col=1)
    fig.update_xaxes(title=dict(text=f"NPV vs baseline [{st.currency}]"), tickformat=",.0f",
                     row=len(cands), col=1)
    fig.update_layout(bargap=0.05)
    return _finish(fig, title, height=160 + 240 * len(cands))


def monte_carlo_chart(result: StudyResult) -> go.Figure:
    """Distribution of NPV over the Monte Carlo draws, per candidate, with P10, P50 and P90.

    Parameters
    ----------
    result : StudyResult
        Reads ``monte_carlo`` (``npv_vs_baseline`` [currency]) and the candidates'
        ``npv_p10``, ``npv_p50``, ``npv_p90`` [currency].

    Returns
    -------
    plotly.graph_objects.Figure
        A histogram per candidate (share of draws [%] in each of :data:`MC_BINS` equal bins
        over its draws' range, binned here so the page carries bars, not draws); P10 dotted,
        P50 solid, P90 dashed, labelled at different heights; the break-even line at NPV 0 in
        red.
    """
    return _monte_carlo(result).figure()


# ----------------------------------------------------------------------------- engine and flame


def efficiency_map_chart(
    speed_rpm: np.ndarray,
    torque_nm: np.ndarray,
    efficiency: np.ndarray,
    operating_points: pd.DataFrame | None = None,
    *,
    colours: Mapping[str, str] | None = None,
    names: Mapping[str, str] | None = None,
    vehicle_class: str | None = None,
    full_load_torque_nm: np.ndarray | None = None,
    title: str = "Brake efficiency map with operating points",
) -> go.Figure:
    """Contours of brake efficiency over engine speed × torque, with time-weighted points.

    Parameters
    ----------
    speed_rpm : array_like
        Engine-speed axis [rpm].
    torque_nm : array_like
        Torque axis [N m].
    efficiency : array_like
        Brake efficiency, shape ``(len(torque_nm), len(speed_rpm))`` [-]; drawn in percent.
    operating_points : pandas.DataFrame, optional
        The ``operating_points`` table; marker area is proportional to ``hours`` [h].
    colours, names : mapping, optional
        Colour and display name by candidate id (``result.colours()`` and the candidates'
        names); names are escaped here.
    vehicle_class : str, optional
        Draw only the points of this vehicle class.
    full_load_torque_nm : array_like, optional
        Full-load torque at each speed of the axis [N m].
    title : str
        Chart title (escaped).

    Returns
    -------
    plotly.graph_objects.Figure

    Raises
    ------
    ValueError
        If the efficiency grid does not match the axes.
    """
    speed = np.asarray(speed_rpm, dtype=float)
    torque = np.asarray(torque_nm, dtype=float)
    eff = np.asarray(efficiency, dtype=float)
    if eff.shape != (torque.size, speed.size):
        raise ValueError(f"efficiency grid is {eff.shape}, axes need {(torque.size, speed.size)}")
    fig = _Fig()
    fig.add_trace(dict(
        type="contour", x=speed, y=torque, z=eff * 100.0, colorscale="Cividis",
        name="brake efficiency",
        contours=dict(showlabels=True, labelfont=dict(size=11, color="#222222")),
        colorbar=dict(title=dict(text="brake efficiency [%]", side="right")),
        hovertemplate="%{x:.0f} rpm, %{y:.0f} N m: brake efficiency %{z:.1f} %<extra></extra>",
    ))
    if full_load_torque_nm is not None:
        fig.add_trace(_scatter(
            x=speed, y=np.asarray(full_load_torque_nm, dtype=float), mode="lines",
            name="full load", line=dict(color="black", width=3),
            hovertemplate="full load at %{x:.0f} rpm: %{y:.0f} N m"))
    points = operating_points if operating_points is not None else pd.DataFrame()
    if vehicle_class is not None and not points.empty:
        points = points[points["vehicle_class"] == vehicle_class]
    if not points.empty:
        colours = colours or {}
        names = names or {}
        hours_max = float(points["hours"].max())
        sizeref = 2.0 * hours_max / 22.0**2 if hours_max > 0.0 else 1.0
        for cand in _order(names, points):
            d = points[points["candidate"] == cand]
            fig.add_trace(_scatter(
                x=_values(d["engine_speed_rpm"]), y=_values(d["torque_nm"]), mode="markers",
                name=escape(names.get(cand, cand)), legendgroup=_group(cand),
                marker=dict(size=_values(d["hours"]), sizemode="area", sizeref=sizeref, sizemin=3,
                            color=colours.get(cand, NEUTRAL), opacity=0.85,
                            line=dict(color="white", width=1)),
                customdata=np.column_stack([d["hours"], d["brake_efficiency"]]),
                hovertemplate=("%{x:.0f} rpm, %{y:.0f} N m<br>%{customdata[0]:,.1f} h, "
                               "brake efficiency %{customdata[1]:.1%}")))
    fig.update_xaxes(title=dict(text="engine speed [rpm]"))
    fig.update_yaxes(title=dict(text="brake torque [N m]"), rangemode="tozero")
    fig.update_layout(legend=dict(orientation="h", y=-0.18))
    return _finish(fig, escape(title), height=520).figure()


def flame_chart(result: StudyResult) -> go.Figure:
    """Adiabatic flame temperature and thermal NO against equivalence ratio, two panels.

    Parameters
    ----------
    result : StudyResult
        Reads the ``flame`` table (``phi`` [-], ``flame_temperature_k`` [K], ``no_ppm`` [ppm]).

    Returns
    -------
    plotly.graph_objects.Figure
        Top panel flame temperature, bottom panel NO, sharing the phi axis.
    """
    return _flame(result).figure()


def _flame(result: StudyResult) -> _Fig:
    title = "Flame temperature and thermal NO against equivalence ratio"
    table = result.flame
    if table.empty:
        return _no_data(title, "flame")
    st = _style(result)
    fig = _Fig(rows=2, cols=1, shared_xaxes=True, vertical_spacing=0.08)
    dashes = ("solid", "dash", "dot", "dashdot")
    for cand in st.order(table):
        rows = table[table["candidate"] == cand]
        for i, fuel_id in enumerate(dict.fromkeys(rows["fuel"])):
            d = rows[rows["fuel"] == fuel_id].sort_values("phi")
            fuel = escape(fuel_id)
            common = dict(name=f"{st.name(cand)}: {fuel}", legendgroup=_group(cand),
                          mode="lines+markers", marker=dict(size=5),
                          line=dict(color=st.colour(cand), width=2,
                                    dash=dashes[i % len(dashes)]))
            fig.add_trace(_scatter(
                x=_values(d["phi"]), y=_values(d["flame_temperature_k"]),
                hovertemplate=f"{fuel}, phi %{{x:.2f}}: %{{y:.0f}} K", **common), row=1, col=1)
            fig.add_trace(_scatter(
                x=_values(d["phi"]), y=_values(d["no_ppm"]), showlegend=False,
                hovertemplate=f"{fuel}, phi %{{x:.2f}}: NO %{{y:.0f}} ppm", **common),
                row=2, col=1)
    fig.update_yaxes(title=dict(text="adiabatic flame temperature [K]"), row=1, col=1)
    fig.update_yaxes(title=dict(text="thermal NO [ppm]"), rangemode="tozero", row=2, col=1)
    fig.update_xaxes(title=dict(text="equivalence ratio phi [-]"), row=2, col=1)
    return _finish(fig, title, height=640)


# ----------------------------------------------------------------------------- all of them


# ----------------------------------------------------------------------------- fleet logs


def _vehicles(result: StudyResult) -> _Fig:
    title = "Fuel per 100 km across the vehicles of each class, outliers named"
    table = result.vehicles
    if table.empty:
        return _no_data(title, "vehicles")
    classes = list(dict.fromkeys(table["vehicle_class"]))
    fig = _Fig(rows=len(classes), cols=1, subplot_titles=_facet_titles(classes, result),
               vertical_spacing=0.12)
    for r, vclass in enumerate(classes, start=1):
        d = table[table["vehicle_class"] == vclass]
        litres = bool(np.isfinite(d["fuel_l_per_100km"].to_numpy(dtype=float)).all())
        column, unit = (("fuel_l_per_100km", "L/100 km") if litres
                        else ("fuel_energy_mj_per_km", "MJ/km"))
        fuel = escape(" / ".join(result.names.fuel(f) for f in dict.fromkeys(d["fuel"])))
        fig.add_trace(dict(
            type="histogram", x=_values(d[column]), nbinsx=max(5, min(30, len(d))),
            name=escape(result.names.vehicle_class(vclass)), showlegend=False,
            marker=dict(color=NEUTRAL, line=dict(color="white", width=1)),
            hovertemplate=f"%{{x}} {unit}: %{{y}} vehicles<extra></extra>"), row=r, col=1)
        n = fig._cell(r, 1)
        for row in d[d["outlier"].astype(bool)].itertuples(index=False):
            fig.add_annotation(text=f"outlier: {escape(row.vehicle)}", x=getattr(row, column),
                               xref=_ref("x", n), y=0, yref=_ref("y", n), showarrow=True,
                               arrowhead=2, ax=0, ay=-40, font=dict(color=BREAK_EVEN))
        fig.update_xaxes(title=dict(text=f"{fuel} per vehicle [{unit}]"), row=r, col=1)
        fig.update_yaxes(title=dict(text="vehicles [-]"), rangemode="tozero", row=r, col=1)
    fig.update_layout(bargap=0.05)
    return _finish(fig, title, height=160 + 260 * len(classes))


def vehicles_chart(result: StudyResult) -> go.Figure:
    """How a fleet-log class's fuel use spreads across its vehicles, outliers named.

    Parameters
    ----------
    result : StudyResult
        Reads the ``vehicles`` table (``fuel_l_per_100km`` [L/100 km], or
        ``fuel_energy_mj_per_km`` [MJ/km] for a fuel without litres; ``outlier`` [bool]); one
        row of facets per vehicle class.

    Returns
    -------
    plotly.graph_objects.Figure
        A histogram of vehicles per class on the baseline's fuel; an arrow names each vehicle
        outside Tukey's fences (``workbench.models.fleet.tukey_outliers``).
    """
    return _vehicles(result).figure()


def _as_grid(grid: MapGrid | EngineMap) -> MapGrid:
    return grid if isinstance(grid, MapGrid) else MapGrid.from_engine_map(grid)


def _map_figures(result: StudyResult, source: MapSource) -> dict[str, go.Figure]:
    """The efficiency-map charts of :func:`all_figures`, by key."""
    names = dict(zip(result.candidates["candidate"], result.candidates["name"], strict=True))
    label = "Brake efficiency map with operating points"
    points = result.operating_points
    # (key, map, points, title) of each chart
    charts: list[tuple[str, MapGrid | EngineMap, pd.DataFrame, str]] = []
    if isinstance(source, Mapping) or not isinstance(source, Sequence):
        grids = source.items() if isinstance(source, Mapping) else [(None, source)]
        for vclass, grid in grids:
            if vclass is None:
                name = _as_grid(grid).name
                charts.append(("efficiency_map", grid, points,
                               f"{label}: {name}" if name else label))
            else:
                charts.append((f"efficiency_map:{vclass}", grid,
                               points[points["vehicle_class"] == vclass], f"{label}: {vclass}"))
    else:
        drawn: set[str] = set()
        for rm in source:
            vclass = rm.vehicle_class
            key = (f"efficiency_map:{vclass}" if vclass not in drawn
                   else f"efficiency_map:{vclass}:{rm.options[0]}")
            drawn.add(vclass)
            on_map = points[(points["vehicle_class"] == vclass)
                            & points["candidate"].isin(rm.options)]
            options = ", ".join(result.names.candidate(o) for o in rm.options)
            charts.append((key, rm.engine_map, on_map,
                           f"{label}: {result.names.vehicle_class(vclass)} — {options}"))
    out = {}
    for key, grid, on_map, title in charts:
        g = _as_grid(grid)
        out[key] = efficiency_map_chart(
            g.speed_rpm, g.torque_nm, g.efficiency, on_map, colours=result.colours(),
            names=names, full_load_torque_nm=g.full_load_torque_nm, title=title)
    return out


#: What the efficiency-map charts can be drawn from (see :func:`all_figures`).
MapSource: TypeAlias = ("MapGrid | EngineMap | Mapping[str, MapGrid | EngineMap] "
                        "| Sequence[RunMap]")


def all_figures(
    result: StudyResult,
    *,
    map_grid: MapSource | None = None,
) -> dict[str, go.Figure]:
    """Every chart of a result, by key, in report order.

    Parameters
    ----------
    result : StudyResult
        The study's result.
    map_grid : MapGrid, EngineMap, mapping of them by vehicle class, or RunMap list, optional
        Efficiency map(s) to draw the operating points on. One map draws every point; a
        mapping draws one chart per vehicle class (key ``"efficiency_map:<class>"``) with that
        class's points; the maps a study's options run on
        (``workbench.study.runner.run_maps``) draw one chart per class and map with the points
        of the options on it, titled with their names (key ``"efficiency_map:<class>"`` for
        the baseline's map, ``"efficiency_map:<class>:<option>"`` for another). Without it
        there is no efficiency-map chart.

    Returns
    -------
    dict of str to plotly.graph_objects.Figure
        ``vehicles`` is among them only when a class ran from its vehicles' logs.
    """
    figs = {
        "cost_per_km": cost_per_km_chart(result),
        "co2_per_km": co2_per_km_chart(result),
        "nox_monthly": nox_monthly_chart(result),
        "energy_density": energy_density_chart(result),
        "cash_flow": cash_flow_chart(result),
    }
    if map_grid is not None:
        figs.update(_map_figures(result, map_grid))
    figs["tornado"] = tornado_chart(result)
    figs["monte_carlo"] = monte_carlo_chart(result)
    figs["flame"] = flame_chart(result)
    if not result.vehicles.empty:
        figs["vehicles"] = vehicles_chart(result)
    return figs


#: Builders of the result charts as plain figure dicts, by chart key.
_BUILDERS: dict[str, Callable[[StudyResult], _Fig]] = {
    "cost_per_km": _cost_per_km,
    "co2_per_km": _co2_per_km,
    "nox_monthly": _nox_monthly,
    "energy_density": _energy_density,
    "cash_flow": _cash_flow,
    "tornado": _tornado,
    "monte_carlo": _monte_carlo,
    "flame": _flame,
    "vehicles": _vehicles,
}


def figure_dict(key: str, result: StudyResult) -> dict[str, Any]:
    """One chart of a result as a plain Plotly figure dict, not validated (for redraws).

    Parameters
    ----------
    key : str
        Chart key: ``cost_per_km``, ``co2_per_km``, ``nox_monthly``, ``energy_density``,
        ``cash_flow``, ``tornado``, ``monte_carlo``, ``flame`` or ``vehicles``.
    result : StudyResult
        The study's result.

    Returns
    -------
    dict
        ``data`` and ``layout``; the same figure as the key's ``*_chart`` builder. The layout
        shares one template dict with every other chart: do not edit it in place.
    """
    return _BUILDERS[key](result).to_dict()
