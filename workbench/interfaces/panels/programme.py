"""Programme panel: phasing, grants, loans, refuelling stations and fuel taxes of the candidates.

Phasing is written as shares or vehicle counts by year (``0.5, 0.5`` or ``105, 105``; empty:
all in year 0); a grant as a sum per vehicle or a share (``500``, ``30 %``); a loan as its
share, rate and term; a station by where it is and its window, costs or detour; a fuel tax per
fuel with its unit (``0.45 per L``; empty: the price includes it). A table (loan, station) is
written whole once each of its fields is filled; "none" takes it out of the study. The panel
shows the report's lines on the programme and the stations table of the last good run.
"""

from __future__ import annotations

from typing import Any

import ipywidgets as widgets

from workbench.core.errors import InputError
from workbench.interfaces.panels.fields import (
    BoundField,
    error_widget,
    esc,
    get_or,
    label,
    show_error,
    text_box,
    to_raw,
)
from workbench.interfaces.panels.state import StudyState, option_slots
from workbench.interfaces.report import programme_html
from workbench.study.studyfile import STATION_LOCATIONS

#: A station's fields by location, with the text shown when the study leaves them out.
STATION_FIELDS = {
    "depot": {"window": "8 h", "compressor_cost": "0", "storage_cost": "0",
              "dispenser_cost": "0", "upkeep_share": "0 %"},
    "off-depot": {"window": "8 h", "detour": "0 min", "hour_cost": "0"},
}
#: A loan's fields and the text shown when the study has no loan.
LOAN_FIELDS = {"share": "", "rate": "", "term_years": ""}


def phasing_value(text: str) -> list[float | int]:
    """What a phasing field writes: ``"0.5, 0.5"`` -> ``[0.5, 0.5]``; empty -> ``[1]``
    (all in year 0).

    Raises
    ------
    InputError
        A part that is not a number.
    """
    parts = [p.strip() for p in text.replace(";", ",").split(",") if p.strip()]
    values = [to_raw(p) for p in parts] or [1]
    bad = [v for v in values if isinstance(v, str)]
    if bad:
        raise InputError("phasing", f"{bad[0]!r} is not a number; write shares or counts "
                         "by year, e.g. 0.5, 0.5")
    return values


def phasing_text(raw: Any) -> str:
    """How a phasing value is shown: ``[0.5, 0.5]`` -> ``"0.5, 0.5"``."""
    return ", ".join(str(v) for v in raw) if isinstance(raw, list) else ""


class TableRow(widgets.VBox):
    """Fields of one study table (a loan, a station), written whole when all are filled.

    Parameters
    ----------
    state : StudyState
        The shared state.
    path : str
        Key path of the table (``candidates[1].loan``).
    title : str
        Heading.
    fields : dict of str to str
        Field names and the text shown when the study does not give them.
    fixed : dict, optional
        Values written with the fields (a station's location).
    """

    def __init__(self, state: StudyState, path: str, title: str, fields: dict[str, str], *,
                 fixed: dict[str, Any] | None = None) -> None:
        self.state, self.path, self.fixed = state, path, dict(fixed or {})
        raw = get_or(state.study, path, {})
        raw = raw if isinstance(raw, dict) else {}
        self.boxes = {k: text_box(str(raw.get(k, default))) for k, default in fields.items()}
        self.error = error_widget()
        for box in self.boxes.values():
            box.observe(lambda _c: self.commit(), names="value")
        rows = [widgets.HBox([label(k.replace("_", " ")), box]) for k, box in self.boxes.items()]
        super().__init__([widgets.HTML(f"<b>{esc(title)}</b>"), *rows, self.error])

    def value(self) -> dict[str, Any] | None:
        """The table the fields describe; None while a field is empty."""
        if any(not b.value.strip() for b in self.boxes.values()):
            return None
        return {**self.fixed, **{k: to_raw(b.value) for k, b in self.boxes.items()}}

    def commit(self) -> None:
        """Write the table when every field is filled (else say which is missing)."""
        table = self.value()
        if table is None:
            empty = next(k for k, b in self.boxes.items() if not b.value.strip())
            show_error(self.error, InputError(f"{self.path}.{empty}", "is empty; fill it in"))
            return
        show_error(self.error, self.state.apply(self.path, table))


class ProgrammePanel(widgets.VBox):
    """Phasing, grants, loans, stations and fuel taxes of a study's candidates.

    Parameters
    ----------
    state : StudyState
        The shared state.

    Attributes
    ----------
    phasing, grants : dict of str to BoundField
        By key path (one per class when the study sets them by class).
    loans, stations : dict of str to TableRow
        By the candidate's key path of the table.
    locations : dict of str to ipywidgets.Dropdown
        Each candidate's station location (``none`` for no station).
    taxes : dict of str to BoundField
        Fuel tax by fuel id.
    summary : ipywidgets.HTML
        The report's programme lines and stations table.
    """

    def __init__(self, state: StudyState) -> None:
        self.state = state
        study = state.study
        cands = [s for s in option_slots(study, "phasing") if not s.option.is_baseline]
        self.phasing = {s.path: BoundField(
            state, s.path, f"{s.title}: conversions by year",
            text_box(phasing_text(get_or(study, s.path, None)), width="160px"),
            convert=phasing_value) for s in cands}
        self.grants = {s.path: BoundField(
            state, s.path, f"{s.title}: grant per vehicle or %",
            text_box(str(get_or(study, s.path, "0"))), convert=to_raw)
            for s in option_slots(study, "grant") if not s.option.is_baseline}
        prefixes = [f"candidates[{i}]" for i in range(len(study.inputs.candidates))]
        names = dict(zip(prefixes, (o.name for o in study.inputs.candidates), strict=True))
        self.loans = {f"{p}.loan": TableRow(state, f"{p}.loan", f"{names[p]}: loan",
                                            LOAN_FIELDS) for p in prefixes}
        self.locations: dict[str, widgets.Dropdown] = {}
        self.stations: dict[str, TableRow] = {}
        self.station_box = {p: widgets.VBox() for p in prefixes}
        for p in prefixes:
            raw = get_or(study, f"{p}.station", None)
            where = raw.get("location", "depot") if isinstance(raw, dict) else "none"
            drop = widgets.Dropdown(options=("none", *STATION_LOCATIONS), value=where,
                                    layout=widgets.Layout(width="140px"))
            drop.observe(lambda change, p=p: self._location(p, change["new"]), names="value")
            self.locations[p] = drop
            self._station_row(p, where)
        self.taxes: dict[str, BoundField] = {}
        self.tax_box = widgets.VBox()
        self.summary = widgets.HTML()
        self._show()
        state.on_change(lambda _s: self._show())
        stations = [widgets.VBox([widgets.HBox([label(f"{names[p]}: station"),
                                                self.locations[p]]), self.station_box[p]])
                    for p in prefixes]
        super().__init__([
            widgets.HTML("<h3>Programme</h3><p>Conversions by year as shares or vehicle "
                         "counts (<code>0.5, 0.5</code>); grants per vehicle or as a share "
                         "(<code>30 %</code>); a loan's share, rate and term; the refuelling "
                         "station; fuel taxes on top of the prices (<code>0.45 per L</code>). "
                         "Station sizes are screening estimates: licensed practitioners design "
                         "and install gas stations, local codes decide.</p>"),
            *self.phasing.values(), *self.grants.values(), *self.loans.values(), *stations,
            widgets.HTML("<h4>Fuel taxes</h4>"), self.tax_box, self.summary])

    def _station_row(self, prefix: str, where: str) -> None:
        path = f"{prefix}.station"
        if where == "none":
            self.stations.pop(path, None)
            self.station_box[prefix].children = ()
            return
        row = TableRow(self.state, path, "station", STATION_FIELDS[where],
                       fixed={"location": where})
        self.stations[path] = row
        self.station_box[prefix].children = (row,)

    def _location(self, prefix: str, where: str) -> None:
        path = f"{prefix}.station"
        self._station_row(prefix, where)
        if where == "none":
            self.state.apply_many({}, remove=(path,))
        else:
            self.stations[path].commit()

    def _show(self) -> None:
        """Fuel-tax fields for the study's fuels (rebuilt when they change) and the summary."""
        study = self.state.study
        fuels = list(study.get("prices"))
        if fuels != list(self.taxes):
            self.taxes = {fid: self.taxes.get(fid) or BoundField(
                self.state, f"fuel_tax.{fid}", f"fuel tax on {fid}",
                text_box(str(get_or(study, f"fuel_tax.{fid}", ""))), convert=to_raw,
                empty_removes=True) for fid in fuels}
            self.tax_box.children = tuple(self.taxes.values())
        result = self.state.result
        self.summary.value = "" if result is None else programme_html(result)
