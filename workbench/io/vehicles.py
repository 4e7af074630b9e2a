"""Vehicle files (TOML): road-load and driveline parameters in, a :class:`Vehicle` out.

The keys are listed in ``docs/duty.md``; each number may be written plainly or as
``{ value = 1450, source = "typical value, example" }``. A :class:`Vehicle` is a frozen
dataclass of numbers, so it is compared and hashed by its content; reading is keyed by the
file's content.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from workbench.core.cache import memoize
from workbench.core.constants import RPM
from workbench.core.errors import InputError
from workbench.core.textfiles import parse_toml
from workbench.core.values import read_number
from workbench.io.csvtext import read_file_bytes
from workbench.models.vehicle import Vehicle

#: TOML key -> (Vehicle field, factor to SI). Values may be plain numbers or
#: ``{ value = ..., source = "..." }`` tables.
_TOML_FIELDS: dict[str, tuple[str, float]] = {
    "mass_kg": ("mass", 1.0),
    "payload_kg": ("payload", 1.0),
    "frontal_area_m2": ("frontal_area", 1.0),
    "drag_coefficient": ("drag_coefficient", 1.0),
    "rolling_resistance": ("rolling_resistance", 1.0),
    "driveline_efficiency": ("driveline_efficiency", 1.0),
    "wheel_radius_m": ("wheel_radius", 1.0),
    "final_drive": ("final_drive", 1.0),
    "shift_speed_rpm": ("shift_speed", RPM),
    "max_engine_speed_rpm": ("max_engine_speed", RPM),
    "air_density_kg_per_m3": ("air_density", 1.0),
    "rotating_mass_factor": ("rotating_mass_factor", 1.0),
}
_OPTIONAL = {"air_density_kg_per_m3", "rotating_mass_factor"}


#: Upper ends of the vehicle numbers [unit of the key], far beyond any road vehicle (a 40 t
#: truck, a 3 m² bus front, 20 000 rpm); the lower ends are the model's own checks.
_HIGHEST = {
    "mass_kg": 200_000.0, "payload_kg": 200_000.0, "frontal_area_m2": 50.0,
    "wheel_radius_m": 3.0, "final_drive": 50.0, "shift_speed_rpm": 20_000.0,
    "max_engine_speed_rpm": 20_000.0, "air_density_kg_per_m3": 5.0,
}
#: Largest gear ratio and most gears.
_MAX_GEAR_RATIO = 100.0
_MAX_GEARS = 30


def _number(path: Path, key: str, raw: object) -> object:
    value = raw.get("value") if isinstance(raw, dict) else raw
    if isinstance(value, bool) or not isinstance(value, int | float | list):
        raise InputError(f"{path}: {key}", "must be a number or { value = ..., source = \"...\" }")
    if not isinstance(value, list):
        read_number(value, f"{path}: {key}", high=_HIGHEST.get(key))
    return value


def read_vehicle(path: str | Path) -> Vehicle:
    """Read a vehicle description from TOML.

    Parameters
    ----------
    path : str or pathlib.Path
        TOML file with ``name`` and the keys listed in ``docs/duty.md`` (``mass_kg``,
        ``frontal_area_m2``, ``gear_ratios``, ...); each number may be written as
        ``{ value = 1450, source = "typical value, example" }``.

    Returns
    -------
    Vehicle

    Raises
    ------
    InputError
        Unreadable file, unknown or missing keys, values out of range.
    """
    return _parse_vehicle(str(path), read_file_bytes(path))


def _key(name: str, data: bytes) -> tuple[str, bytes]:
    return name, hashlib.sha256(data).digest()


@memoize(maxsize=32, key=_key)
def _parse_vehicle(name: str, data: bytes) -> Vehicle:
    """A vehicle from the file's bytes (cached by their content)."""
    path = Path(name)
    tree = parse_toml(data, str(path))
    known = {"name", "description", "invented", "source", "gear_ratios", *_TOML_FIELDS}
    for key in tree:
        if key not in known:
            raise InputError(f"{path}: {key}", f"unknown key; known keys: {', '.join(known)}")
    name = tree.get("name", path.stem)
    if not isinstance(name, str):
        raise InputError(f"{path}: name", f"must be a text, got {type(name).__name__}")
    kwargs: dict[str, object] = {"name": name}
    for key, (attr, factor) in _TOML_FIELDS.items():
        if key not in tree:
            if key in _OPTIONAL:
                continue
            raise InputError(str(path), f"missing key {key}")
        value = _number(path, key, tree[key])
        if isinstance(value, list):
            raise InputError(f"{path}: {key}", "must be a single number")
        kwargs[attr] = float(value) * factor
    if "gear_ratios" not in tree:
        raise InputError(str(path), "missing key gear_ratios")
    gears = _number(path, "gear_ratios", tree["gear_ratios"])
    if not isinstance(gears, list) or not all(
            isinstance(g, int | float) and not isinstance(g, bool) for g in gears):
        raise InputError(f"{path}: gear_ratios", "must be a list of numbers, first gear first")
    if len(gears) > _MAX_GEARS:
        raise InputError(f"{path}: gear_ratios", f"lists {len(gears)} gears; at most {_MAX_GEARS}")
    for i, g in enumerate(gears):
        read_number(g, f"{path}: gear_ratios[{i}]", high=_MAX_GEAR_RATIO)
    kwargs["gear_ratios"] = tuple(float(g) for g in gears)
    try:
        return Vehicle(**kwargs)  # type: ignore[arg-type]
    except InputError as exc:
        raise InputError(f"{path}: {exc.where.split(': ')[-1]}", exc.message) from None
