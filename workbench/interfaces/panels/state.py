"""The state the panels share: the study being edited and its last good result.

A :class:`StudyState` holds the current :class:`~workbench.study.studyfile.Study` and the last good
:class:`~workbench.study.results.StudyResult`. A panel asks it to change one or more values of the
study (by key path, raw values as they would be written in the study file); the state checks the
new study, re-runs it and tells every listener. A change that fails its check, or whose run
fails on a user input, leaves both the study and the result as they were and comes back as the
:class:`~workbench.core.errors.InputError` for the panel to show beside the field.

This module imports no widgets: the panels wire it to ipywidgets, the tests drive it directly.
"""

from __future__ import annotations

import tempfile
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from workbench.core.errors import InputError
from workbench.study.fleet import Progress
from workbench.study.results import StudyResult
from workbench.study.runner import run
from workbench.study.studyfile import Option, Study

#: Listener of a state: called with the state after each successful change and run.
Listener = Callable[["StudyState"], None]


class StudyState:
    """The study being edited, its last good result, and who to tell when they change.

    Parameters
    ----------
    study : Study
        The checked study to start from.
    draws : int, optional
        Monte Carlo draws of every run; the study's ``programme.monte_carlo_draws`` when
        omitted.
    upload_dir : pathlib.Path, optional
        Folder where uploaded profile and map CSVs are saved (the study refers to them by
        absolute path); a new temporary folder when omitted.
    run_now : bool
        Run the study at once (a few seconds of chemistry the first time).

    Attributes
    ----------
    study : Study
        The current study (always checked).
    result : StudyResult or None
        The result of the last successful run.
    status : str
        What the last run did, or what the current run is doing.
    vehicle_progress : tuple of int or None
        (vehicles done, vehicles in all) of the last fleet run reported; None before any.
    """

    def __init__(self, study: Study, *, draws: int | None = None,
                 upload_dir: Path | None = None, run_now: bool = True) -> None:
        self.study = study
        self.result: StudyResult | None = None
        self.draws = draws
        self.upload_dir = Path(upload_dir) if upload_dir is not None else Path(
            tempfile.mkdtemp(prefix="workbench-uploads-"))
        self.status = "not run yet"
        self._listeners: list[Listener] = []
        self._progress: list[Callable[[str], None]] = []
        self._vehicles: list[Progress] = []
        self.vehicle_progress: tuple[int, int] | None = None
        if run_now:
            self.rerun()

    def on_change(self, listener: Listener) -> None:
        """Call ``listener(state)`` after every successful change and run."""
        self._listeners.append(listener)

    def on_progress(self, callback: Callable[[str], None]) -> None:
        """Call ``callback(text)`` as each step of a run starts and when it ends."""
        self._progress.append(callback)

    def on_vehicles(self, callback: Progress) -> None:
        """Call ``callback(done, total)`` as each vehicle of a fleet run finishes (a class run
        from its logs; the same callback ``workbench fleet run`` prints on the terminal)."""
        self._vehicles.append(callback)

    def _vehicle_done(self, done: int, total: int) -> None:
        self.vehicle_progress = (done, total)
        for callback in self._vehicles:
            callback(done, total)

    def _say(self, text: str) -> None:
        self.status = text
        for callback in self._progress:
            callback(text)

    def _run(self, study: Study) -> StudyResult:
        start = time.perf_counter()
        result = run(study, draws=self.draws, progress=lambda t: self._say(f"running: {t} …"),
                     vehicles=self._vehicle_done)
        self._say(f"up to date (last run {time.perf_counter() - start:.2f} s)")
        return result

    def rerun(self) -> None:
        """Run the current study and tell the listeners.

        Raises
        ------
        InputError
            A user input that only fails when run (a profile or map CSV that cannot be read).
        """
        self.result = self._run(self.study)
        self._notify()

    def _notify(self) -> None:
        for listener in self._listeners:
            listener(self)

    def apply(self, path: str, value: Any) -> InputError | None:
        """Change one value of the study and re-run it.

        Parameters
        ----------
        path : str
            Key path such as ``prices.lpg.mode`` or ``programme.discount_rate``.
        value : object
            The new raw value, as written in a study file.

        Returns
        -------
        InputError or None
            The error to show beside the field; None when the study changed and re-ran, or
            when the value was already there.
        """
        return self.apply_many({path: value})

    def apply_many(self, changes: Mapping[str, Any], *,
                   remove: tuple[str, ...] = ()) -> InputError | None:
        """Change several values at once (checked together) and re-run the study.

        Parameters
        ----------
        changes : mapping of str to object
            Raw values by key path.
        remove : tuple of str
            Key paths of table entries to delete in the same step (a fuel's price when no
            option uses that fuel any more).

        Returns
        -------
        InputError or None
            As :meth:`apply`.
        """
        try:
            study = self.study.with_values(changes, remove=remove)
            if study == self.study:
                return None
            result = self._run(study)
        except InputError as exc:
            self._say(f"not applied: {exc.where}: {exc.message} (results below are the last "
                      "good ones)")
            return exc
        self.study, self.result = study, result
        self._notify()
        return None


@dataclass(frozen=True)
class OptionSlot:
    """Where one option sets one key: for every class at once, or for one class.

    Attributes
    ----------
    title : str
        Option name, and vehicle class when the option sets the key per class.
    path : str
        Key path (``candidates[0].fuel``, ``baseline.aftertreatment.taxi``).
    option : Option
        The option as the study reads it.
    class_id : str
        The class whose parsed value the slot shows (the first class it converts).
    """

    title: str
    path: str
    option: Option
    class_id: str


def option_slots(study: Study, key: str) -> list[OptionSlot]:
    """Every place the options set ``key`` (``fuel``, ``aftertreatment``), baseline first.

    An option that gives the key as a table by class id has one slot per class; otherwise one
    slot (also when the key is absent, so a panel can add it). A class an option gives another
    drive (battery-electric) has no engine keys and no slot.

    Parameters
    ----------
    study : Study
        The study.
    key : str
        Option key.

    Returns
    -------
    list of OptionSlot
    """
    inputs = study.inputs
    class_ids = {c.id for c in inputs.classes}
    prefixes = ["baseline", *(f"candidates[{i}]" for i in range(len(inputs.candidates)))]
    data = study.data
    tables = [data["baseline"], *data["candidates"]]
    slots = []
    for prefix, table, option in zip(prefixes, tables, inputs.options, strict=True):
        raw = table.get(key)
        engine = {cid for cid, co in option.per_class.items() if co.drive == "combustion"}
        if isinstance(raw, dict) and raw and set(raw) <= class_ids:
            slots += [OptionSlot(f"{option.name}: {cid}", f"{prefix}.{key}.{cid}", option, cid)
                      for cid in raw if cid in engine]
        else:
            converted = [cid for cid, co in option.per_class.items() if co.converts]
            if converted and not set(converted) & engine:
                continue
            converted = [cid for cid in converted if cid in engine]
            slots.append(OptionSlot(option.name, f"{prefix}.{key}", option,
                                    (converted or list(option.per_class))[0]))
    return slots
