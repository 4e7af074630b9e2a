"""Widgets shared by the panels: a text field bound to a key path, with its error beside it.

Every field shows the error of the change it made in a red :class:`ipywidgets.HTML` right next
to it (one line: the key path and the fix, HTML-escaped), and clears it on the next good change.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from pathlib import Path
from typing import Any

import ipywidgets as widgets

from workbench.core.errors import InputError
from workbench.core.text import escape_html as esc
from workbench.core.text import sha256_hex
from workbench.interfaces.panels.state import StudyState
from workbench.io.files import write_text_atomic
from workbench.models.economics import DISTRIBUTION_PARAMETERS
from workbench.study.studyfile import Study

#: Style of an error shown beside a field.
ERROR_STYLE = "color:#B00020;font-weight:600"
#: Width of the label before a field.
LABEL_WIDTH = "190px"
#: Kinds an uncertain input can take, "fixed" first (a plain value).
KINDS = tuple(DISTRIBUTION_PARAMETERS)
_INTEGER = re.compile(r"\s*[-+]?\d+\s*")
_NUMBER = re.compile(r"\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*")


def error_html(error: InputError | str | None) -> str:
    """The markup of an error shown beside a field ('' for none)."""
    if error is None:
        return ""
    text = f"{error.where}: {error.message}" if isinstance(error, InputError) else error
    return f'<span class="wb-error" style="{ERROR_STYLE}">{esc(text)}</span>'


def error_widget() -> widgets.HTML:
    """An empty error slot to put beside a field."""
    return widgets.HTML("", layout=widgets.Layout(margin="0 0 0 8px"))


def show_error(slot: widgets.HTML, error: InputError | str | None) -> None:
    """Show ``error`` in ``slot`` (or clear it)."""
    slot.value = error_html(error)


def css_class(path: str) -> str:
    """CSS class of the field writing ``path`` (``prices.lpg.mode`` -> ``wb-prices-lpg-mode``)."""
    return "wb-" + re.sub(r"[^A-Za-z0-9]+", "-", path).strip("-")


def to_raw(text: str) -> int | float | str:
    """What a text field writes into the study: a bare number as a number, else the text."""
    if _INTEGER.fullmatch(text):
        return int(text)
    if _NUMBER.fullmatch(text):
        return float(text)
    return text.strip()


def to_text(raw: Any) -> str:
    """How a raw study value is shown in a text field."""
    return "" if raw is None else str(raw)


def label(text: str) -> widgets.Label:
    """A label of fixed width before a field."""
    return widgets.Label(text, layout=widgets.Layout(width=LABEL_WIDTH))


def text_box(value: str, *, description: str = "", width: str = "140px") -> widgets.Text:
    """A text field that commits on Enter or when it loses focus."""
    return widgets.Text(value=value, description=description, continuous_update=False,
                        layout=widgets.Layout(width=width),
                        style={"description_width": "initial"})


class BoundField(widgets.HBox):
    """A labelled widget whose value is written to one key path of the study.

    Parameters
    ----------
    state : StudyState
        The shared state.
    path : str
        Key path written on change.
    title : str
        Label text.
    control : ipywidgets.ValueWidget
        The editing widget (Text, Dropdown, IntText…).
    convert : callable, optional
        Turns the widget's value into the raw study value (``to_raw`` for text fields); an
        InputError it raises is shown beside the field.
    empty_removes : bool, optional
        An empty text takes the key out of the study (an optional entry such as a fuel tax).
    """

    def __init__(self, state: StudyState, path: str, title: str, control: widgets.ValueWidget,
                 *, convert: Callable[[Any], Any] | None = None,
                 empty_removes: bool = False) -> None:
        self.state = state
        self.path = path
        self.control = control
        self.error = error_widget()
        self._convert = convert or (lambda v: v)
        self._empty_removes = empty_removes
        control.add_class(css_class(path))
        control.observe(self._changed, names="value")
        super().__init__([label(title), control, self.error],
                         layout=widgets.Layout(align_items="center"))

    def _changed(self, change: dict[str, Any]) -> None:
        if self._empty_removes and not str(change["new"]).strip():
            show_error(self.error, self.state.apply_many({}, remove=(self.path,)))
            return
        try:
            value = self._convert(change["new"])
        except InputError as exc:
            show_error(self.error, InputError(self.path, exc.message))
            return
        show_error(self.error, self.state.apply(self.path, value))


class UncertainField(widgets.HBox):
    """An input that may carry a distribution: a kind and one text field per parameter.

    The study value is assembled from every field at each change: the plain value for
    ``fixed``, else a table ``{kind, <parameters>}``. Switching kind pre-fills the new
    parameters from the current central value (value, mode or mean) and tries it; a parameter
    left empty shows what is missing beside the field until it is filled.

    Parameters
    ----------
    state : StudyState
        The shared state.
    path : str
        Key path of the input (``prices.lpg``, ``programme.discount_rate``).
    title : str
        Label text.
    default : str
        Text shown when the study does not have the key (the model's default).
    """

    def __init__(self, state: StudyState, path: str, title: str, default: str = "") -> None:
        self.state = state
        self.path = path
        raw = get_or(state.study, path, default)
        kind = raw.get("kind", "fixed") if isinstance(raw, dict) else "fixed"
        values = ({k: to_text(v) for k, v in raw.items() if k != "kind"}
                  if isinstance(raw, dict) else {"value": to_text(raw)})
        self.kind = widgets.Dropdown(options=KINDS, value=kind,
                                     layout=widgets.Layout(width="110px"))
        self.kind.add_class(css_class(f"{path}.kind"))
        self.params: dict[str, widgets.Text] = {}
        self.box = widgets.HBox()
        self.error = error_widget()
        self._build(kind, values)
        self.kind.observe(self._kind_changed, names="value")
        super().__init__([label(title), self.kind, self.box, self.error],
                         layout=widgets.Layout(align_items="center", flex_flow="row wrap"))

    def _build(self, kind: str, values: dict[str, str]) -> None:
        self.params = {}
        for name in DISTRIBUTION_PARAMETERS[kind]:
            box = text_box(values.get(name, ""), description="" if kind == "fixed" else name)
            box.observe(self._param_changed, names="value")
            box.add_class(css_class(f"{self.path}.{name}"))
            self.params[name] = box
        self.box.children = tuple(self.params.values())

    def central(self) -> str:
        """Text of the central parameter (value, mode or mean), or the first one."""
        for name in ("value", "mode", "mean"):
            if name in self.params:
                return self.params[name].value
        return next(iter(self.params.values())).value

    def raw(self) -> Any:
        """The study value the fields describe."""
        if self.kind.value == "fixed":
            return to_raw(self.params["value"].value)
        return {"kind": self.kind.value,
                **{name: to_raw(box.value) for name, box in self.params.items()}}

    def _kind_changed(self, change: dict[str, Any]) -> None:
        centre = self.central()
        old = {name: box.value for name, box in self.params.items()}
        values = {name: old.get(name, "" if name == "sd" else centre)
                  for name in DISTRIBUTION_PARAMETERS[change["new"]]}
        self._build(change["new"], values)
        self._commit()

    def _param_changed(self, _change: dict[str, Any]) -> None:
        self._commit()

    def _commit(self) -> None:
        empty = [name for name, box in self.params.items() if not box.value.strip()]
        if empty:
            show_error(self.error, InputError(f"{self.path}.{empty[0]}",
                                              "is empty; fill it in"))
            return
        show_error(self.error, self.state.apply(self.path, self.raw()))


def get_or(study: Study, path: str, default: Any) -> Any:
    """The raw value at ``path``, or ``default`` when the study does not have the key."""
    try:
        return study.get(path)
    except InputError:
        return default


def save_upload(folder: Path, name: str, content: bytes,
                reader: Callable[[Path], object]) -> Path:
    """Save an uploaded CSV into ``folder`` after checking it with ``reader``.

    The file is named after the upload (letters, digits, ``-``, ``_`` kept) and the first
    8 hex digits of its SHA-256, so two uploads never overwrite each other. A file that fails
    its check is deleted again.

    Parameters
    ----------
    folder : pathlib.Path
        Where uploads are kept.
    name : str
        The uploaded file's name (user text).
    content : bytes
        Its contents.
    reader : callable
        A reader of :mod:`workbench.io` (``read_profile``, ``read_map``): raises InputError on
        a bad file.

    Returns
    -------
    pathlib.Path
        The saved file.

    Raises
    ------
    InputError
        Not a ``.csv`` name, or the reader's complaint, naming the uploaded file.
    """
    if not name.lower().endswith(".csv"):
        raise InputError(name, "upload a .csv file")
    try:
        text = content.decode("utf-8-sig")  # a spreadsheet's "CSV UTF-8" has a BOM
    except UnicodeDecodeError:
        raise InputError(name, "is not UTF-8 text; save the CSV as UTF-8") from None
    stem = re.sub(r"[^A-Za-z0-9_-]+", "-", Path(name).stem).strip("-") or "upload"
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{stem}-{sha256_hex(content)[:8]}.csv"
    write_text_atomic(path, text, suffix=".csv", option=name)
    try:
        reader(path)
    except InputError as exc:
        path.unlink(missing_ok=True)
        raise InputError(exc.where.replace(str(path), name), exc.message) from None
    return path
