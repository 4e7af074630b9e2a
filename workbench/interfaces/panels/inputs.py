"""Duty and efficiency-map panels: per vehicle class, a shipped file or an uploaded CSV.

Both panels share :class:`ClassFileChoice`: pick the vehicle class, then a shipped profile
(map) or upload a CSV (checked with the same reader the study uses before the study points at
it). The duty panel shows the profile's statistics and its speed–time trace; the map panel
shows the map as contours with the duty's operating points of the last good result.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import ipywidgets as widgets
import numpy as np
import plotly.graph_objects as go

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.interfaces.charts import TEMPLATE, MapGrid, efficiency_map_chart
from workbench.interfaces.panels.fields import error_widget, esc, label, save_upload, show_error
from workbench.interfaces.panels.results import FigurePane
from workbench.interfaces.panels.state import StudyState
from workbench.io.logs import FleetSource
from workbench.io.maps import read_map
from workbench.io.profiles import read_profile
from workbench.models.duty import DutyTrace, ModeTable, duty_stats
from workbench.study.runner import run_maps
from workbench.study.studyfile import FleetClass


class ClassFileChoice(widgets.VBox):
    """Which file one key of each vehicle class points at: shipped, or uploaded.

    Parameters
    ----------
    state : StudyState
        The shared state.
    key : str
        Key of the class table (``profile`` or ``engine_map``).
    folder : str
        Folder of shipped files under ``workbench/data`` (``profiles`` or ``maps``).
    reader : callable
        Checks an uploaded file (raises InputError).
    on_shown : callable
        Called with the class index after the class or its file changed (not while the
        widget is made: the panel draws itself then).
    """

    def __init__(self, state: StudyState, key: str, folder: str,
                 reader: Callable[[Path], object], on_shown: Callable[[int], None]) -> None:
        self.state = state
        self.key = key
        self._reader = reader
        self._on_shown = on_shown
        classes = state.study.get("classes")
        self.vehicle_class = widgets.Dropdown(
            options=[(str(c.get("name", c["id"])), i) for i, c in enumerate(classes)], value=0,
            layout=widgets.Layout(width="260px"))
        shipped = sorted(p.stem for p in (DATA / folder).glob("*.csv"))
        self.choice = widgets.Dropdown(options=[(s, s) for s in shipped],
                                       layout=widgets.Layout(width="260px"))
        self.upload = widgets.FileUpload(accept=".csv", multiple=False,
                                         description="upload CSV")
        self.error = error_widget()
        raw = state.study.get(f"classes[0].{key}")
        self._add_option(raw)
        self.choice.value = raw
        self.vehicle_class.observe(lambda ch: self._show_class(ch["new"]), names="value")
        self.choice.observe(self._choice_changed, names="value")
        self.upload.observe(self._uploaded, names="value")
        super().__init__([
            widgets.HBox([label("vehicle class"), self.vehicle_class]),
            widgets.HBox([label(key.replace("_", " ")), self.choice, self.upload, self.error],
                         layout=widgets.Layout(align_items="center", flex_flow="row wrap")),
        ])

    def path(self) -> str:
        """Key path of the shown class's file."""
        return f"classes[{self.vehicle_class.value}].{self.key}"

    def _add_option(self, raw: str) -> None:
        if raw not in [v for _, v in self.choice.options]:
            self.choice.options = [*self.choice.options, (Path(raw).name, raw)]

    def _show_class(self, index: int) -> None:
        raw = self.state.study.get(f"classes[{index}].{self.key}")
        self._add_option(raw)
        self.choice.value = raw  # the same value as the study: applying it changes nothing
        show_error(self.error, None)
        self._on_shown(index)

    def _choice_changed(self, change: dict[str, Any]) -> None:
        error = self.state.apply(self.path(), change["new"])
        show_error(self.error, error)
        if error is None:
            self._on_shown(self.vehicle_class.value)

    def _uploaded(self, change: dict[str, Any]) -> None:
        if not change["new"]:
            return
        upload = change["new"][0]
        try:
            saved = save_upload(self.state.upload_dir, str(upload["name"]),
                                bytes(upload["content"]), self._reader)
        except InputError as exc:
            show_error(self.error, exc)
            return
        self._add_option(str(saved))
        self.choice.value = str(saved)


def stats_html(duty: DutyTrace | ModeTable | FleetSource) -> str:
    """Statistics of a duty profile as an HTML table (a time-at-mode table says so)."""
    if isinstance(duty, FleetSource):
        return (f"<p>Vehicle logs: {len(duty.vehicles)} vehicles in {esc(duty.source)}"
                f"{f', {len(duty.problems)} files left out' if duty.problems else ''}; each "
                "is run when the study runs (docs/fleet-logs.md).</p>")
    if not isinstance(duty, DutyTrace):
        hours = float(np.sum(duty.duration)) / 3600.0
        return (f"<p>Time-at-mode table: {len(duty.duration)} modes, {hours:,.1f} h; no speed "
                "trace to plot.</p>")
    s = duty_stats(duty)
    rows = {
        "distance [km]": f"{s.distance / 1e3:,.1f}",
        "duration [h]": f"{s.duration / 3600:,.2f}",
        "mean speed, stops included [km/h]": f"{s.mean_speed * 3.6:.1f}",
        "maximum speed [km/h]": f"{s.max_speed * 3.6:.1f}",
        "time stopped [%]": f"{s.idle_share * 100:.1f}",
        "stops per km [1/km]": f"{s.stops_per_m * 1e3:.2f}",
        "positive kinetic energy [m/s²]": f"{s.positive_kinetic_energy:.3f}",
    }
    body = "".join(f"<tr><td>{esc(k)}</td><td style='text-align:right'>{esc(v)}</td></tr>"
                   for k, v in rows.items())
    return f'<table class="wb-duty-stats" style="font-size:13px">{body}</table>'


def speed_figure(duty: DutyTrace | ModeTable | FleetSource, profile: Path) -> go.Figure:
    """Speed against time of a trace profile (empty for a time-at-mode table).

    ``profile`` is the file it was read from, named in the title.
    """
    fig = go.Figure()
    if isinstance(duty, DutyTrace):
        fig.add_trace(go.Scatter(x=duty.time / 60.0, y=duty.speed * 3.6, mode="lines",
                                 name="speed", line=dict(width=1, color="#0072B2"),
                                 hovertemplate="%{x:.1f} min: %{y:.0f} km/h<extra></extra>"))
    fig.update_layout(template=TEMPLATE, height=300, margin=dict(l=60, r=20, t=40, b=50),
                      title=dict(text=f"Speed trace: {esc(Path(profile).name)}", x=0.0))
    fig.update_xaxes(title_text="time [min]")
    fig.update_yaxes(title_text="speed [km/h]", rangemode="tozero")
    return fig


class _PlotPanel(widgets.VBox):
    """A panel whose plot may be made later (see :meth:`show_plot`).

    Subclasses define ``_figure()``, the chart of what the panel shows now.
    """

    plot: FigurePane | None = None

    def show_plot(self) -> FigurePane:
        """Make the panel's plot (once) and draw it.

        The app makes the plots of its hidden tabs when a tab is first opened, so a page
        draws only what is on screen.
        """
        if self.plot is None:
            self.plot = FigurePane(self._figure())
            self.children = (*self.children, self.plot)
        return self.plot


class DutyPanel(_PlotPanel):
    """Duty profile of each vehicle class: shipped or uploaded, its statistics and trace.

    Parameters
    ----------
    state : StudyState
        The shared state.
    plot : bool
        Make the speed–time plot at once; otherwise on :meth:`show_plot`.
    """

    def __init__(self, state: StudyState, *, plot: bool = True) -> None:
        self.state = state
        self.stats = widgets.HTML("")
        self.files = ClassFileChoice(state, "profile", "profiles", read_profile,
                                     lambda _i: self._draw())
        super().__init__([widgets.HTML("<h3>Duty</h3>"), self.files, self.stats])
        self._draw()
        if plot:
            self.show_plot()

    def _class(self) -> FleetClass:
        return self.state.study.inputs.classes[self.files.vehicle_class.value]

    def _figure(self) -> go.Figure:
        c = self._class()
        return speed_figure(c.profile_data, c.profile)

    def _draw(self) -> None:
        self.stats.value = stats_html(self._class().profile_data)
        if self.plot is not None:
            self.plot.show(self._figure())


def map_figure(state: StudyState, index: int) -> go.Figure:
    """The map of one class as contours, with the operating points of the last run's options
    that run on it; the title names the options that run on a map of their own (a derived
    map or their own file, drawn in the report)."""
    c = state.study.inputs.classes[index]
    grid = MapGrid.from_engine_map(c.map_data)
    result = state.result
    title = f"{c.name}: {Path(c.engine_map).name}"
    if result is None:
        return efficiency_map_chart(grid.speed_rpm, grid.torque_nm, grid.efficiency,
                                    full_load_torque_nm=grid.full_load_torque_nm, title=title)
    maps = [m for m in run_maps(state.study.inputs) if m.vehicle_class == c.id]
    on_file = {o for m in maps if m.engine_map == c.map_data for o in m.options}
    elsewhere = [result.names.candidate(o) for m in maps for o in m.options if o not in on_file]
    if elsewhere:
        title += f" (on their own maps, see the report: {', '.join(elsewhere)})"
    points = result.operating_points
    points = points[points["candidate"].isin(on_file)]
    names = dict(zip(result.candidates["candidate"], result.candidates["name"], strict=True))
    return efficiency_map_chart(
        grid.speed_rpm, grid.torque_nm, grid.efficiency, points, colours=result.colours(),
        names=names, vehicle_class=c.id, full_load_torque_nm=grid.full_load_torque_nm,
        title=title)


class EngineMapPanel(_PlotPanel):
    """Efficiency map of each vehicle class: shipped or uploaded, drawn with its duty's points.

    Parameters
    ----------
    state : StudyState
        The shared state.
    plot : bool
        Make the map plot at once; otherwise on :meth:`show_plot`.
    """

    def __init__(self, state: StudyState, *, plot: bool = True) -> None:
        self.state = state
        self.files = ClassFileChoice(state, "engine_map", "maps", read_map,
                                     lambda _i: self._draw())
        state.on_change(lambda _s: self._draw())
        super().__init__([widgets.HTML("<h3>Efficiency map</h3>"), self.files])
        if plot:
            self.show_plot()

    def _figure(self) -> go.Figure:
        return map_figure(self.state, self.files.vehicle_class.value)

    def _draw(self) -> None:
        if self.plot is not None:
            self.plot.show(self._figure())
