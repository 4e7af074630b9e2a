"""Reader of fuel-card exports: one row per fill (date, vehicle, fuel bought, odometer).

Columns are found by name as in the logger readers (``docs/fleet-logs.md``): ``date`` (ISO 8601
date or time), ``vehicle`` (or ``vehicle_id``), the amount as ``litres`` / ``liters`` /
``volume_l`` / ``fuel_l`` or ``kg`` / ``mass_kg`` / ``fuel_kg``, and ``odometer_km`` or
``odometer_mi``. Other columns are ignored; BOM, ``;`` with decimal commas, quotes and ``#``
comments are read as in the logs.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from workbench.core.errors import InputError
from workbench.io.logs import VEHICLE_NAMES, _dialect, _numbers, _read_csv, _seconds, normalise
from workbench.models.calibration import FuelRecords

#: Amount columns: normalised name -> (basis, factor to m3 or kg).
AMOUNTS = {"litres": ("volume", 1e-3), "liters": ("volume", 1e-3), "volume_l": ("volume", 1e-3),
           "fuel_l": ("volume", 1e-3), "kg": ("mass", 1.0), "mass_kg": ("mass", 1.0),
           "fuel_kg": ("mass", 1.0)}
#: Odometer columns: normalised name -> factor to m (mile exact, NIST Handbook 44, App. C).
ODOMETERS = {"odometer_km": 1e3, "odometer_mi": 1609.344}


def read_fuel_cards(path: str | Path) -> FuelRecords:
    """Read a fuel-card CSV.

    Parameters
    ----------
    path : str or pathlib.Path

    Returns
    -------
    FuelRecords
        Fills in SI (m3 or kg, m, epoch seconds).

    Raises
    ------
    InputError
        Missing file or column, bad date or number, negative amounts; names file and row.
    """
    path = Path(path)
    d = _dialect(path)
    found: dict[str, str] = {}
    basis, factor, odo_factor = "", 1.0, 1.0
    for raw in d.header:
        key = normalise(raw)
        if key == "date" and "date" not in found:
            found["date"] = raw
        elif key in VEHICLE_NAMES and "vehicle" not in found:
            found["vehicle"] = raw
        elif key in AMOUNTS and "amount" not in found:
            found["amount"] = raw
            basis, factor = AMOUNTS[key]
        elif key in ODOMETERS and "odometer" not in found:
            found["odometer"] = raw
            odo_factor = ODOMETERS[key]
    hints = {"date": "date", "vehicle": "vehicle", "amount": "litres or kg",
             "odometer": "odometer_km or odometer_mi"}
    for need, hint in hints.items():
        if need not in found:
            raise InputError(str(path), f"no {need} column (name it {hint}); columns are "
                                        f"{', '.join(d.header)}")
    frame = next(_read_csv(path, d, list(found.values()), None))
    first = d.header_line + 1
    where = str(path)
    vehicle = frame[found["vehicle"]].astype("string").str.strip()
    if vehicle.isna().any():
        raise InputError(f"{where} row {first + int(np.argmax(vehicle.isna()))}",
                         "vehicle is empty")
    time = _seconds(frame[found["date"]], "iso", where, first, found["date"])
    amount = _numbers(frame[found["amount"]], where, first, found["amount"]) * factor
    odometer = _numbers(frame[found["odometer"]], where, first, found["odometer"]) * odo_factor
    for name, values in (("date", time), (found["amount"], amount),
                         (found["odometer"], odometer)):
        bad = ~np.isfinite(values) | (values < 0.0) if name != "date" else ~np.isfinite(values)
        if bad.any():
            raise InputError(f"{where} row {first + int(np.argmax(bad))}",
                             f"{name} is missing or negative")
    return FuelRecords(vehicle=vehicle.to_numpy(dtype=str), time=time, amount=amount,
                       odometer=odometer, basis=basis,
                       rows=first + np.arange(len(frame)), name=where)
