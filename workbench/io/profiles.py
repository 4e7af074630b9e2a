"""Duty-profile files: speed–time traces and time-at-mode tables (CSV), read and written.

A profile CSV names each column's quantity and unit in its header
(``time_s,speed_km_per_h,grade_percent,payload_kg``) or takes the units from a side file
``<stem>.units.toml``; a time-at-mode table has an ``engine_speed`` column and may carry
``# distance_km: 412``. Other columns (notes, names) are ignored. The format is in
``docs/duty.md``; everything returned is SI (:class:`~workbench.models.duty.DutyTrace`,
:class:`~workbench.models.duty.ModeTable`).

Reading is keyed by the file's content: the same bytes are tokenised once per process, an
edited file is read again.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from workbench.core.cache import memoize
from workbench.core.constants import RPM
from workbench.core.errors import InputError
from workbench.core.textfiles import parse_toml
from workbench.io.csvtext import CsvTable, parse_csv, read_file_bytes
from workbench.models.duty import DutyTrace, ModeTable

_TIME_UNITS = {"s": 1.0, "min": 60.0, "h": 3600.0}

#: Known trace columns: quantity -> {unit token: factor to SI}.
TRACE_COLUMNS: dict[str, dict[str, float]] = {
    "time": _TIME_UNITS,
    "speed": {"km_per_h": 1.0 / 3.6, "m_per_s": 1.0, "mph": 0.44704},
    "grade": {"percent": 0.01, "fraction": 1.0},
    "payload": {"kg": 1.0, "t": 1000.0},
}

#: Known time-at-mode columns: quantity -> {unit token: factor to SI}.
MODE_COLUMNS: dict[str, dict[str, float]] = {
    "engine_speed": {"rpm": RPM, "rad_per_s": 1.0},
    "torque": {"n_m": 1.0, "kn_m": 1000.0},
    "time": _TIME_UNITS,
}

_SPECS = {"trace": TRACE_COLUMNS, "mode": MODE_COLUMNS}
#: Upper ends of a profile's numbers [SI], far beyond any road vehicle, and how they are said:
#: larger values overflow the road-load and fuel sums (v³, speed × time).
HIGHEST: dict[str, tuple[float, str]] = {
    "time": (1e9, "1e9 s (31 years)"),
    "speed": (500 / 3.6, "500 km/h"),
    "payload": (200_000.0, "200 t"),
    "engine_speed": (20_000 * RPM, "20 000 rpm"),
    "torque": (100_000.0, "100 000 N m"),
}
_REQUIRED = {"trace": ("time", "speed"), "mode": ("engine_speed", "torque", "time")}


def _side_units(name: str, text: str | None) -> dict[str, str]:
    if text is None:
        return {}
    side = str(Path(name).with_name(Path(name).stem + ".units.toml"))
    data = parse_toml(text, side)
    units = data.get("units")
    if not isinstance(units, dict) or not all(isinstance(u, str) for u in units.values()):
        raise InputError(side, "needs a [units] table of column = \"unit\" strings")
    return {k.lower(): v for k, v in units.items()}


def _columns(name: str, header: tuple[str, ...], spec: dict[str, dict[str, float]],
             side: dict[str, str]) -> dict[str, tuple[int, float]]:
    """Quantity -> (column index, factor to SI), checking names and units."""
    stem = Path(name).stem
    found: dict[str, tuple[int, float]] = {}
    quantities = sorted(spec, key=len, reverse=True)  # "engine_speed" wins over "speed"
    for j, col in enumerate(header):
        for q in quantities:
            if col == q:
                unit = side.get(col)
                if unit is None:
                    raise InputError(
                        f"{name} column {col}",
                        f"no unit: name it like {q}_{next(iter(spec[q]))} or give "
                        f"{stem}.units.toml with [units] {col} = \"...\"")
            elif col.startswith(q + "_"):
                unit = col[len(q) + 1:]
            else:
                continue
            if unit not in spec[q]:
                raise InputError(f"{name} column {col}",
                                 f"unknown unit '{unit}' for {q}; use one of "
                                 f"{', '.join(spec[q])}")
            if q in found:
                raise InputError(f"{name} column {col}", f"{q} is given twice; keep one")
            found[q] = (j, spec[q][unit])
            break
    return found


def _kind(header: tuple[str, ...]) -> str:
    return "mode" if any(c.startswith("engine_speed") for c in header) else "trace"


@memoize(maxsize=16)
def _parse_profile(name: str, data: bytes, side: str | None) -> DutyTrace | ModeTable:
    """A profile from the file's bytes and its side file's text (cached by their content).

    The key is the bytes themselves: Python's hash of them, then an exact comparison on a
    match, a few times cheaper than a SHA-256 of a week of 1 Hz data (and no collisions).
    """
    units = _side_units(name, side)
    kinds: list[str] = []
    found: dict[str, tuple[int, float]] = {}

    def numeric(header: tuple[str, ...]) -> list[int]:
        kinds.append(_kind(header))
        found.update(_columns(name, header, _SPECS[kinds[0]], units))
        return [j for j, _ in found.values()]

    table = parse_csv(data, name, numeric)
    kind, spec = kinds[0], _SPECS[kinds[0]]
    missing = [q for q in _REQUIRED[kind] if q not in found]
    if missing:
        q = missing[0]
        raise InputError(name, f"missing column {q} (e.g. {q}_{next(iter(spec[q]))})")
    cols = {q: table.columns[j] if factor == 1.0 else table.columns[j] * factor
            for q, (j, factor) in found.items()}
    for q, values in cols.items():
        high, said = HIGHEST.get(q, (np.inf, ""))
        beyond = values > high  # NaN is not beyond: the model names a missing cell
        if beyond.any():
            raise InputError(table.where(int(np.argmax(beyond))),
                             f"{q} is beyond any road vehicle; at most {said}")
    if kind == "mode":
        return _mode_table(table, cols)
    return DutyTrace(time=cols["time"], speed=cols["speed"], grade=cols.get("grade"),
                     payload=cols.get("payload"), name=name, rows=table.rows)


def _mode_table(table: CsvTable, cols: dict[str, np.ndarray]) -> ModeTable:
    for q, values in cols.items():
        bad = ~np.isfinite(values)
        if bad.any():
            raise InputError(table.where(int(np.argmax(bad))), f"{q} is missing; fill the cell")
    distance = None
    meta = table.metadata(("distance_km",))
    if "distance_km" in meta:
        lineno, text = meta["distance_km"]
        try:
            distance = float(text) * 1000.0
        except ValueError:
            raise InputError(f"{table.name} row {lineno}",
                             "distance_km must be a number, e.g. '# distance_km: 412'") from None
    return ModeTable(engine_speed=cols["engine_speed"], torque=cols["torque"],
                     duration=cols["time"], distance=distance, name=table.name)


def read_profile(path: str | Path) -> DutyTrace | ModeTable:
    """Read a duty profile: a time-at-mode table if it has an engine-speed column, else a trace.

    Parameters
    ----------
    path : str or pathlib.Path
        A trace CSV (``time_s,speed_km_per_h`` and optionally ``grade_percent``,
        ``payload_kg``) or a time-at-mode CSV (``engine_speed_rpm,torque_n_m,time_h``);
        lines starting with ``#`` are comments, other columns are ignored.

    Returns
    -------
    DutyTrace or ModeTable
        In SI units, named after the file.

    Raises
    ------
    InputError
        Missing file or columns, unknown units, bad numbers, time not increasing, negative
        speeds; the message names the file and row.
    """
    path = Path(path)
    data = read_file_bytes(path)
    side_path = path.with_name(path.stem + ".units.toml")
    side = None
    if side_path.is_file():
        try:
            side = read_file_bytes(side_path).decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError(str(side_path), "is not UTF-8 text; save it as UTF-8") from None
    return _parse_profile(str(path), data, side)


def parse_profile(data: bytes, name: str = "<stdin>") -> DutyTrace | ModeTable:
    """A duty profile from a CSV file's bytes (e.g. standard input); see :func:`read_profile`.

    Parameters
    ----------
    data : bytes
        The CSV file's content (UTF-8, a byte-order mark allowed); units from column names
        only, as there is no side file.
    name : str
        What messages and the profile call the input.

    Returns
    -------
    DutyTrace or ModeTable

    Raises
    ------
    InputError
        As :func:`read_profile`.
    """
    return _parse_profile(name, data, None)


def read_trace(path: str | Path) -> DutyTrace:
    """Read a speed–time trace from CSV (see :func:`read_profile`).

    Raises
    ------
    InputError
        As :func:`read_profile`, and when the file is a time-at-mode table.
    """
    duty = read_profile(path)
    if not isinstance(duty, DutyTrace):
        raise InputError(str(path), "is a time-at-mode table; a speed trace is needed here")
    return duty


def read_mode_table(path: str | Path) -> ModeTable:
    """Read a time-at-mode table from CSV (see :func:`read_profile`).

    Raises
    ------
    InputError
        As :func:`read_profile`, and when the file has no ``engine_speed`` column.
    """
    duty = read_profile(path)
    if not isinstance(duty, ModeTable):
        raise InputError(str(path), "has no engine_speed column; a time-at-mode table needs "
                                    "engine_speed, torque and time columns")
    return duty


def format_trace_csv(trace: DutyTrace, *, comments: tuple[str, ...] = ()) -> str:
    """Render a trace as CSV text in the shipped format (km/h, percent, kg).

    Parameters
    ----------
    trace : DutyTrace
        The trace.
    comments : tuple of str
        Lines written first, each prefixed with ``# ``.

    Returns
    -------
    str
        CSV text with header ``time_s,speed_km_per_h[,grade_percent][,payload_kg]`` that
        :func:`read_trace` reads back.
    """
    cols = [np.char.mod("%.10g", trace.time), np.char.mod("%.2f", trace.speed * 3.6)]
    header = ["time_s", "speed_km_per_h"]
    if trace.grade is not None:
        cols.append(np.char.mod("%.2f", trace.grade * 100.0))
        header.append("grade_percent")
    if trace.payload is not None:
        cols.append(np.char.mod("%.0f", trace.payload))
        header.append("payload_kg")
    body = [",".join(fields) for fields in zip(*cols, strict=True)]
    lines = [f"# {c}" for c in comments] + [",".join(header), *body]
    return "\n".join(lines) + "\n"
