"""Engine efficiency-map files (CSV grids), read and written.

The format (``docs/duty.md``): ``# key: value`` metadata lines (``value``, ``idle_speed_rpm``,
``idle_fuel_power_kw``, and ``bsfc_lhv_mj_per_kg`` for BSFC maps), a header
``torque_n_m/speed_rpm,<speeds>``, a ``full_load,<torques>`` row, then one row per torque:
``<torque>,<brake efficiency or BSFC per speed>``. :func:`read_map` returns an
:class:`~workbench.models.engine.EngineMap`; :func:`format_map_csv` writes one back. Reading is
keyed by the file's content.
"""

from __future__ import annotations

import hashlib
import math
import re
from pathlib import Path

import numpy as np

from workbench.core.cache import memoize
from workbench.core.constants import J_PER_KWH, RPM, to_rpm
from workbench.core.errors import InputError
from workbench.io.csvtext import CsvTable, parse_csv, read_file_bytes
from workbench.models.engine import EngineMap

_MAP_KEYS = ("value", "idle_speed_rpm", "idle_fuel_power_kw", "bsfc_lhv_mj_per_kg")
_SPEED_UNITS = {"rpm": RPM, "rad_per_s": 1.0}
_VALUE_KINDS = ("brake_efficiency", "bsfc_g_per_kwh")


def _numbers(table: CsvTable, cells: tuple[str, ...], lineno: int, what: str) -> np.ndarray:
    """The number cells of a head row (all but the first)."""
    out = np.empty(len(cells) - 1)
    for j, c in enumerate(cells[1:], start=1):
        try:
            out[j - 1] = float(c)
        except ValueError:
            raise InputError(f"{table.name} row {lineno} column {j + 1}",
                             f"{what} cell '{c}' is missing or not a number") from None
        if not math.isfinite(out[j - 1]):
            raise InputError(f"{table.name} row {lineno} column {j + 1}",
                             f"{what} cell is not finite; write a number")
    return out


#: Upper ends of a map's numbers, far beyond any vehicle engine: speed [rpm], torque [N m]
#: (a truck engine gives some 3000), idle fuel [kW].
MAX_SPEED_RPM = 20_000.0
MAX_TORQUE = 100_000.0
MAX_IDLE_FUEL_KW = 1000.0


def _at_most(values: np.ndarray, high: float, where: str, what: str) -> None:
    if np.any(values > high):
        raise InputError(where, f"{what} {float(values.max()):g} is beyond any vehicle engine; at "
                         f"most {high:g}")


def _meta_number(name: str, meta: dict[str, tuple[int, str]], key: str) -> float:
    text = meta[key][1]
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"{name}: {key}", f"'{text}' is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{name}: {key}", f"'{text}' is not a finite number")
    return value


def _key(name: str, data: bytes) -> tuple[str, bytes]:
    return name, hashlib.sha256(data).digest()


@memoize(maxsize=32, key=_key)
def _parse_map(name: str, data: bytes) -> EngineMap:
    """A map from the file's bytes (cached by their content)."""
    try:
        table = parse_csv(data, name, lambda header: range(len(header)), head_rows=2)
    except InputError as exc:
        if exc.message.startswith("no header"):
            raise InputError(name, "needs a header, a full_load row and >= 2 torque rows"
                             ) from None
        raise
    meta = table.metadata(_MAP_KEYS)
    for key in ("value", "idle_speed_rpm", "idle_fuel_power_kw"):
        if key not in meta:
            raise InputError(name, f"missing metadata line '# {key}: ...'")
    value_kind = meta["value"][1]
    if value_kind not in _VALUE_KINDS:
        raise InputError(f"{name}: value", f"unknown '{value_kind}'; use one of "
                                           f"{', '.join(_VALUE_KINDS)}")
    if len(table.rows) < 2:
        raise InputError(name, "needs a header, a full_load row and >= 2 torque rows")
    (header, full_row), (hline, fline) = table.heads, table.head_lines
    m = re.fullmatch(r"torque_n_m/speed_([a-z_]+)", table.header[0].replace(" ", ""))
    if not m or m.group(1) not in _SPEED_UNITS:
        raise InputError(f"{name} row {hline}",
                         "first header cell must be torque_n_m/speed_rpm (or speed_rad_per_s)")
    speed = _numbers(table, header, hline, "speed") * _SPEED_UNITS[m.group(1)]
    _at_most(to_rpm(speed), MAX_SPEED_RPM, f"{name} row {hline}", "speed [rpm]")
    bad = np.flatnonzero(np.diff(speed) <= 0)
    if bad.size:
        raise InputError(f"{name} row {hline} column {bad[0] + 3}",
                         "speed axis is not strictly increasing; order the columns by speed")
    if full_row[0].lower() != "full_load":
        raise InputError(f"{name} row {fline}",
                         "second row must be the full_load torque row, 'full_load,<N m>...'")
    full = _numbers(table, full_row, fline, "full_load")
    _at_most(full, MAX_TORQUE, f"{name} row {fline}", "full-load torque [N m]")
    values = np.column_stack([table.columns[j] for j in range(len(header))])
    missing = ~np.isfinite(values)
    if missing.any():
        i, j = np.argwhere(missing)[0]
        raise InputError(f"{table.where(int(i))} column {j + 1}",
                         "map cell '' is missing or not a number; fill every cell")
    torque = values[:, 0]
    _at_most(torque, MAX_TORQUE, f"{name} column 1", "torque [N m]")
    bad = np.flatnonzero(np.diff(torque) <= 0)
    if bad.size:
        raise InputError(table.where(int(bad[0]) + 1),
                         "torque axis is not strictly increasing; order the rows by torque")
    grid = values[:, 1:]
    if value_kind == "bsfc_g_per_kwh":
        if "bsfc_lhv_mj_per_kg" not in meta:
            raise InputError(name, "a BSFC map needs '# bsfc_lhv_mj_per_kg: ...' (LHV of the "
                                   "test fuel)")
        lhv = _meta_number(name, meta, "bsfc_lhv_mj_per_kg") * 1e6
        if np.any(grid <= 0):
            raise InputError(name, "BSFC cells must be positive")
        grid = J_PER_KWH * 1e3 / (grid * lhv)  # g/kWh -> kg/J is 1e-3/J_PER_KWH
    bad_cells = ~((grid > 0.0) & (grid < 1.0))
    if bad_cells.any():
        i, j = np.argwhere(bad_cells)[0]
        raise InputError(f"{table.where(int(i))} column {j + 2}",
                         "efficiency must be in (0, 1); check the value kind and units")
    idle_kw = _meta_number(name, meta, "idle_fuel_power_kw")
    _at_most(np.array([idle_kw]), MAX_IDLE_FUEL_KW, f"{name}: idle_fuel_power_kw", "idle fuel [kW]")
    try:
        return EngineMap(name=name, speed=speed, torque=torque, efficiency=grid,
                         full_load_torque=full,
                         idle_speed=_meta_number(name, meta, "idle_speed_rpm") * RPM,
                         idle_fuel_power=idle_kw * 1e3)
    except InputError as exc:
        raise InputError(f"{name}: {exc.where.split(': ')[-1]}", exc.message) from None


def read_map(path: str | Path) -> EngineMap:
    """Read an efficiency map from a CSV grid.

    Parameters
    ----------
    path : str or pathlib.Path
        CSV as described in ``docs/duty.md`` and the module notes.

    Returns
    -------
    EngineMap
        Named after the file.

    Raises
    ------
    InputError
        Missing cells or metadata, axes out of order, unknown units, values out of range; the
        message names the file and row.
    """
    return _parse_map(str(path), read_file_bytes(path))


def format_map_csv(engine_map: EngineMap, *, comments: tuple[str, ...] = ()) -> str:
    """Render a map as CSV text in brake efficiency, speeds in rpm.

    Parameters
    ----------
    engine_map : EngineMap
        The map.
    comments : tuple of str
        Free-text lines written first, each prefixed with ``# ``.

    Returns
    -------
    str
        Text that :func:`read_map` reads back.
    """
    lines = [f"# {c}" for c in comments] + [
        "# value: brake_efficiency",
        f"# idle_speed_rpm: {to_rpm(engine_map.idle_speed):.0f}",
        f"# idle_fuel_power_kw: {engine_map.idle_fuel_power / 1e3:.3f}",
        "torque_n_m/speed_rpm," + ",".join(f"{to_rpm(n):.0f}" for n in engine_map.speed),
        "full_load," + ",".join(f"{t:.1f}" for t in engine_map.full_load_torque),
    ]
    for t, row in zip(engine_map.torque, engine_map.efficiency, strict=True):
        lines.append(f"{t:.1f}," + ",".join(f"{e:.4f}" for e in row))
    return "\n".join(lines) + "\n"
