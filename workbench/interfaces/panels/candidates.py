"""Fuel candidates panel: each option's fuel from the library, or a blend of two with a slider.

One row per fuel choice of the study (the baseline's per class when it names one per class,
each candidate's). Picking a library fuel writes its id; a blend is written as a study-file
blend table that keeps the option's fuel id, so the price, escalation and upstream entries of
that id still apply. Picking a fuel the study has no price for copies the old fuel's price,
escalation and upstream entries to the new id (the panel says so: check them in the economics
panel) and drops the old fuel's entries when no option uses it any more. Each row shows the
fuel's sheet (``workbench.interfaces.sheets.fuel_record``) as a table. Each candidate's
conversion kind (``bi-fuel-si``, ``dedicated-si``, ...) is picked beside its fuel, or left to
the study's inference; the row says which kind each class gets. A ``dual-fuel-ci`` candidate's
pilot fuel (a compression-ignition fuel; by default the diesel the class burns today) is picked
below, with its prices copied as for a fuel.
"""

from __future__ import annotations

import tomllib
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import ipywidgets as widgets

from workbench.core.errors import InputError
from workbench.core.fuels import BASES, Fuel, find_fuel, list_fuels, load_fuel
from workbench.interfaces.panels.fields import error_widget, esc, show_error
from workbench.interfaces.panels.state import OptionSlot, StudyState, option_slots
from workbench.interfaces.sheets import SHEET_FIELDS, format_cell, fuel_record
from workbench.models.conversion import KINDS, fuel_regime
from workbench.study.studyfile import Study

#: Dropdown value meaning "a blend of two library fuels".
BLEND = "(blend of two fuels)"
#: Sheet rows not shown (the header names the fuel; the flame conditions are the defaults).
_HIDDEN = ("id", "name")
@dataclass(frozen=True)
class FuelSlot:
    """One fuel choice of the study: title, key path and the fuel as the study reads it."""

    title: str
    path: str
    fuel: Fuel


#: Price-like tables keyed by fuel id that follow a fuel change.
FUEL_TABLES = ("prices", "escalation", "upstream")


def fuel_slots(study: Study) -> list[FuelSlot]:
    """Every fuel choice of a study with its parsed fuel, baseline first."""
    return [FuelSlot(s.title, s.path, s.option.per_class[s.class_id].fuel)
            for s in option_slots(study, "fuel")]


def library_blend(fuel_id: str) -> tuple[str, str, str, float] | None:
    """The two parts, basis and first share of a library fuel that is a two-part blend."""
    path = find_fuel(fuel_id)
    if path is None:
        return None
    table = tomllib.loads(path.read_text(encoding="utf-8")).get("blend", {})
    parts = {k: v for k, v in table.items() if k not in ("basis", "source")}
    if len(parts) != 2:
        return None
    (a, share), (b, _) = parts.items()
    return a, b, str(table.get("basis", "mole")), float(share)


def sheet_html(fuel: Fuel) -> str:
    """A fuel's sheet as an HTML table (names and units of the glossary), escaped."""
    record = fuel_record(fuel)
    rows = "".join(
        f'<tr data-key="{esc(k)}"><td>{esc(k)}</td><td style="text-align:right">'
        f"{esc(format_cell(record[k]))}</td><td>{esc(unit)}</td></tr>"
        for k, unit in SHEET_FIELDS.items() if k not in _HIDDEN)
    return (f'<div class="wb-sheet"><b>{esc(fuel.name)}</b> ({esc(fuel.id)})'
            f'<table style="font-size:12px;border-collapse:collapse">{rows}</table></div>')


def switch_fuel(state: StudyState, paths: Sequence[str], old_id: str, new_id: str,
                still_used: set[str], *, remove: tuple[str, ...] = ()
                ) -> tuple[InputError | None, str]:
    """Write a library fuel's id at key paths, with the price tables that follow a fuel.

    The new fuel takes the old one's ``prices``, ``escalation`` and ``upstream`` entries where
    the study has none for it; the old fuel's entries go when no other choice uses it.

    Parameters
    ----------
    state : StudyState
        The shared state (changed and re-run on success).
    paths : sequence of str
        Key paths of the fuel choice (one, or one per class).
    old_id, new_id : str
        The fuel there now and the one picked.
    still_used : set of str
        Ids of the fuels the study's other choices burn.
    remove : tuple of str, optional
        Other key paths to delete in the same step.

    Returns
    -------
    (InputError or None, str)
        The error to show, and a note (HTML) naming the copied tables, or "".
    """
    data = state.study.data
    changes: dict[str, Any] = dict.fromkeys(paths, new_id)
    copied = []
    for table in FUEL_TABLES:
        entries = data.get(table, {})
        if new_id not in entries and old_id in entries:
            changes[f"{table}.{new_id}"] = entries[old_id]
            copied.append(table)
    error = state.apply_many(changes, remove=(*remove, *_dropped(data, old_id,
                                                                  still_used | {new_id})))
    note = (f"<i>{esc(', '.join(copied))} of {esc(new_id)} copied from {esc(old_id)}: check "
            "them in the economics panel.</i>") if copied and error is None else ""
    return error, note


def _dropped(data: dict[str, Any], old_id: str, still_used: set[str]) -> tuple[str, ...]:
    """Key paths of a fuel's price-like entries once no choice uses it (none while one does)."""
    if old_id in still_used:
        return ()
    return tuple(f"{t}.{old_id}" for t in FUEL_TABLES if old_id in data.get(t, {}))


def pilot_fuels(study: Study) -> list[Fuel]:
    """The pilot fuels the study's dual-fuel options burn (each class's)."""
    return [co.pilot_fuel for o in study.inputs.options for co in o.per_class.values()
            if co.pilot_fuel is not None]


class FuelRow(widgets.VBox):
    """The editor of one fuel choice: library fuel or blend, its sheet, its error."""

    def __init__(self, state: StudyState, slot: FuelSlot) -> None:
        self.state = state
        self.path = slot.path
        library = list_fuels()
        raw = state.study.get(slot.path)
        current = raw if isinstance(raw, str) else BLEND
        options = [*library, BLEND] + ([current] if current not in (*library, BLEND) else [])
        self.choice = widgets.Dropdown(options=options, value=current, description="fuel",
                                       layout=widgets.Layout(width="320px"))
        a, b, basis, share = self._blend_defaults(raw, slot.fuel, library)
        self.part_a = widgets.Dropdown(options=library, value=a, description="part A",
                                       layout=widgets.Layout(width="220px"))
        self.part_b = widgets.Dropdown(options=library, value=b, description="part B",
                                       layout=widgets.Layout(width="220px"))
        self.basis = widgets.Dropdown(options=BASES, value=basis, description="basis",
                                      layout=widgets.Layout(width="220px"))
        self.share = widgets.FloatSlider(value=share, min=0.05, max=0.95, step=0.05,
                                         description="share of A", continuous_update=False,
                                         readout_format=".0%")
        self.blend_box = widgets.HBox([self.part_a, self.part_b, self.basis, self.share],
                                      layout=widgets.Layout(flex_flow="row wrap"))
        self.blend_box.layout.display = "" if current == BLEND else "none"
        self.error = error_widget()
        self.note = widgets.HTML("")
        self.sheet = widgets.HTML(sheet_html(slot.fuel))
        self.choice.observe(self._choice_changed, names="value")
        for w in (self.part_a, self.part_b, self.basis, self.share):
            w.observe(self._blend_changed, names="value")
        super().__init__([widgets.HTML(f"<b>{esc(slot.title)}</b>"),
                          widgets.HBox([self.choice, self.error]), self.blend_box, self.note,
                          self.sheet],
                         layout=widgets.Layout(border="1px solid #ddd", padding="6px",
                                               margin="4px 0"))

    @staticmethod
    def _blend_defaults(raw: Any, fuel: Fuel, library: list[str]) -> tuple[str, str, str,
                                                                            float]:
        if isinstance(raw, dict) and isinstance(raw.get("parts"), dict) and len(
                raw["parts"]) == 2:
            (a, share), (b, _) = raw["parts"].items()
            return a, b, str(raw.get("basis", "mole")), float(share)
        known = library_blend(fuel.id)
        if known is not None:
            return known
        same_phase = [f for f in library if f != fuel.id and load_fuel(f).is_gas == fuel.is_gas]
        first = fuel.id if fuel.id in library else library[0]
        return first, (same_phase or library)[0], "mole", 0.8

    def _slot(self) -> FuelSlot:
        return next(s for s in fuel_slots(self.state.study) if s.path == self.path)

    def _refresh(self) -> None:
        self.sheet.value = sheet_html(self._slot().fuel)

    def _choice_changed(self, change: dict[str, Any]) -> None:
        self.blend_box.layout.display = "" if change["new"] == BLEND else "none"
        self.note.value = ""
        if change["new"] == BLEND:
            self._blend_changed({})
            return
        self._apply_library(change["new"])

    def _apply_library(self, new_id: str) -> None:
        study = self.state.study
        old_id = self._slot().fuel.id
        still_used = {s.fuel.id for s in fuel_slots(study) if s.path != self.path} | {
            f.id for f in pilot_fuels(study)}
        # a production pathway named on the option belongs to the old fuel's sheet: it goes
        # when the new fuel has none of that name (the new fuel's [upstream] entry applies)
        pathway = f"{self.path.split('.fuel', 1)[0]}.pathway"
        names = study.get(pathway) if _has(study, pathway) else None
        names = list(names.values()) if isinstance(names, dict) else [names] if names else []
        known = {p.name for p in load_fuel(new_id).pathways}
        dropped = (pathway,) if any(n not in known for n in names) else ()
        error, note = switch_fuel(self.state, (self.path,), old_id, new_id, still_used,
                                  remove=dropped)
        show_error(self.error, error)
        if error is None:
            self._refresh()
            self.note.value = note + (
                f" <i>pathway {esc(', '.join(names))} removed: {esc(new_id)} has no such "
                "pathway, so its [upstream] entry applies.</i>" if dropped else "")

    def _blend_changed(self, _change: dict[str, Any]) -> None:
        if self.choice.value != BLEND:
            return
        a, b = self.part_a.value, self.part_b.value
        if a == b:
            show_error(self.error, InputError(f"{self.path}.parts", "pick two different fuels"))
            return
        share = round(float(self.share.value), 4)
        value = {"id": self._slot().fuel.id, "basis": self.basis.value,
                 "parts": {a: share, b: round(1.0 - share, 4)}}
        error = self.state.apply(self.path, value)
        show_error(self.error, error)
        if error is None:
            self._refresh()


#: Dropdown value meaning "no conversion key: the study infers the kind per class".
INFERRED = "(inferred from the fuels)"
#: Kinds a study option can name (``dual-fuel-ci`` burns the option's gas with the class's
#: diesel as pilot, or the option's ``pilot_fuel``).
STUDY_KINDS = tuple(KINDS)


def kinds_text(study: Study, option_id: str) -> str:
    """Which conversion kind each class of an option gets, as one line."""
    option = next(o for o in study.inputs.options if o.id == option_id)
    return "; ".join(f"{cid}: {co.conversion}" for cid, co in option.per_class.items()
                     if co.converts)


class ConversionRow(widgets.HBox):
    """The conversion kind of one candidate (or of one of its classes)."""

    def __init__(self, state: StudyState, slot: OptionSlot) -> None:
        self.state = state
        self.path = slot.path
        self.option_id = slot.option.id
        raw = state.study.get(slot.path) if _has(state.study, slot.path) else None
        value = raw if raw in STUDY_KINDS else INFERRED
        self.choice = widgets.Dropdown(options=[INFERRED, *STUDY_KINDS], value=value,
                                       description="conversion",
                                       layout=widgets.Layout(width="320px"))
        self.error = error_widget()
        self.kinds = widgets.HTML(f"<i>{esc(kinds_text(state.study, self.option_id))}</i>")
        self.choice.observe(self._changed, names="value")
        super().__init__([self.choice, self.kinds, self.error],
                         layout=widgets.Layout(flex_flow="row wrap"))

    def _changed(self, change: dict[str, Any]) -> None:
        if change["new"] == INFERRED:
            error = self.state.apply_many({}, remove=(self.path,)) if _has(
                self.state.study, self.path) else None
        else:
            error = self.state.apply(self.path, change["new"])
        show_error(self.error, error)
        if error is None:
            self.kinds.value = f"<i>{esc(kinds_text(self.state.study, self.option_id))}</i>"


#: Dropdown value meaning "no pilot_fuel key: the pilot is the fuel the class burns today".
TODAY_PILOT = "(the class's fuel today)"


def pilot_choices() -> list[str]:
    """Library fuels that can be a dual-fuel engine's pilot (compression-ignition fuels)."""
    out = []
    for fid in list_fuels():
        try:
            if fuel_regime(load_fuel(fid)) == "compression-ignition":
                out.append(fid)
        except InputError:  # a broken user fuel file: the fuel rows say why
            continue
    return out


class PilotRow(widgets.HBox):
    """The pilot fuel of one candidate (or of one of its classes): used where the candidate's
    conversion is ``dual-fuel-ci``, greyed out otherwise."""

    def __init__(self, state: StudyState, slot: OptionSlot) -> None:
        self.state = state
        self.path = slot.path
        self.option_id = slot.option.id
        self.one_class = slot.path.endswith(f".pilot_fuel.{slot.class_id}")
        raw = state.study.get(slot.path) if _has(state.study, slot.path) else None
        choices = pilot_choices()
        value = raw if isinstance(raw, str) else TODAY_PILOT
        self.choice = widgets.Dropdown(
            options=[TODAY_PILOT, *choices, *([value] if value not in (TODAY_PILOT, *choices)
                                              else [])],
            value=value, description="pilot fuel", layout=widgets.Layout(width="320px"))
        self.error = error_widget()
        self.note = widgets.HTML("")
        self.choice.observe(self._changed, names="value")
        state.on_change(lambda _state: self._refresh())
        self._refresh()
        super().__init__([self.choice, self.error, self.note],
                         layout=widgets.Layout(flex_flow="row wrap"))

    def _pilots(self) -> dict[str, Fuel]:
        option = next(o for o in self.state.study.inputs.options if o.id == self.option_id)
        return {cid: co.pilot_fuel for cid, co in option.per_class.items()
                if co.pilot_fuel is not None}

    def _refresh(self) -> None:
        pilots = self._pilots()
        self.choice.disabled = not pilots
        self.note.value = (f"<i>{esc('; '.join(f'{c}: {f.id}' for c, f in pilots.items()))}</i>"
                           if pilots else "<i>dual-fuel-ci only</i>")

    def _changed(self, change: dict[str, Any]) -> None:
        study = self.state.study
        pilots = self._pilots()
        old = next(iter(pilots.values()))
        used = {s.fuel.id for s in fuel_slots(study)} | {
            co.pilot_fuel.id for o in study.inputs.options if o.id != self.option_id
            for co in o.per_class.values() if co.pilot_fuel is not None}
        if change["new"] == TODAY_PILOT:
            error = self.state.apply_many({}, remove=(self.path, *_dropped(
                study.data, old.id, used))) if _has(study, self.path) else None
        else:
            option = next(o for o in study.inputs.options if o.id == self.option_id)
            converted = [cid for cid, co in option.per_class.items() if co.converts]
            # a pilot belongs to dual-fuel classes only: per class where the others differ
            paths = [self.path] if self.one_class or set(pilots) == set(converted) else [
                f"{self.path}.{cid}" for cid in pilots]
            error, note = switch_fuel(self.state, paths, old.id, change["new"], used)
            if error is None and note:
                self.note.value = f"{self.note.value} {note}"  # after the classes' pilots
        show_error(self.error, error)


def _has(study: Study, path: str) -> bool:
    try:
        study.get(path)
    except (KeyError, IndexError, TypeError, InputError):
        return False
    return True


class CandidatesPanel(widgets.VBox):
    """Fuel of each option (baseline and candidates), with its sheet.

    Parameters
    ----------
    state : StudyState
        The shared state.

    Attributes
    ----------
    rows : dict of str to FuelRow
        The editor of each fuel choice, by key path.
    conversions : dict of str to ConversionRow
        The conversion kind of each candidate (or candidate and class), by key path.
    pilots : dict of str to PilotRow
        The pilot fuel of each candidate (or candidate and class), by key path.
    """

    def __init__(self, state: StudyState) -> None:
        self.state = state
        self.rows = {s.path: FuelRow(state, s) for s in fuel_slots(state.study)}
        self.conversions = {s.path: ConversionRow(state, s)
                            for s in option_slots(state.study, "conversion")
                            if not s.option.is_baseline}
        self.pilots = {s.path: PilotRow(state, s)
                       for s in option_slots(state.study, "pilot_fuel")
                       if not s.option.is_baseline}
        super().__init__([widgets.HTML("<h3>Fuel candidates</h3>"), *self.rows.values(),
                          widgets.HTML("<b>Conversion kinds</b> (docs/study-file.md: the map, "
                                       "NOx setting, catalyst and slip each implies)"),
                          *self.conversions.values(),
                          widgets.HTML("<b>Pilot fuels</b> of dual-fuel candidates (the diesel "
                                       "a <code>dual-fuel-ci</code> engine still burns)"),
                          *self.pilots.values()])
