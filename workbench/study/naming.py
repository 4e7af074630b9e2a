"""Readable names for what a study's tables identify by id or key path.

The result tables keep machine ids (``lpg-taxis``, ``van``) and key paths
(``candidates[0].conversion_cost.van``) so that CSV, JSON and tests are stable; everything a
person reads (report, charts, panels) goes through this one layer, which turns them into the
study's own names with units: ``"LPG conversion of the taxis · Vans: conversion cost"``.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from workbench.study.studyfile import ELECTRICITY, StudyInputs, study_fuels

#: Words for study-file keys whose plain spelling reads badly; other keys are spelled out
#: with their underscores as spaces.
KEY_WORDS = {
    "km_per_year": "km per vehicle-year",
    "conversion_cost": "conversion cost per vehicle",
    "upkeep_per_year": "upkeep per vehicle-year",
    "upkeep_change_per_year": "change in upkeep per vehicle-year",
    "programme_capital": "programme capital (year 0)",
    "programme_upkeep_per_year": "programme upkeep per year",
    "daily_revenue": "revenue lost per day off the road",
    "downtime_days": "days off the road for the conversion",
    "efficiency_offset": "brake-efficiency offset",
    "derate": "full-load derate",
    "methane_slip": "methane slip",
    "pilot_fuel": "pilot fuel of a dual-fuel engine",
    "accessory_power": "accessory power",
    "extra_idle_share": "extra idling share",
    "tank_inspection_cost": "tank inspection cost",
    "discount_rate": "discount rate",
    "carbon_price": "carbon price",
    "nox_damage_cost": "NOx damage cost",
    "efficiency_new": "catalyst efficiency when new",
    "efficiency_aged": "catalyst efficiency when aged",
    "life": "catalyst life",
    "parts_cost": "catalyst parts cost",
    "labour_cost": "catalyst labour cost",
    "reductant_price": "reductant price",
    "engine_out_nox": "engine-out NOx",
    "lambda_overall": "overall lambda",
    "monte_carlo_draws": "Monte Carlo draws",
    "horizon_years": "horizon [years]",
    "remaining_life_years": "remaining life [years]",
    "tank_inspection_interval_years": "tank inspection interval [years]",
    "classes": "converted classes",
    "n2o": "tailpipe N2O",
    "vehicle_spread": "mean fuel energy per km of its vehicles (from their spread)",
    "calibration": "fuel-card calibration factor",
    "fuel_cards": "fuel cards",
    "calibrate": "apply the fuel-card calibration",
    "drive": "drive",
    "purchase_price": "new vehicle price",
    "resale_value": "new vehicle resale value",
    "old_vehicle_sale": "sale of the old vehicle",
    "motor_power": "motor power",
    "motor_efficiency": "motor and inverter efficiency",
    "reducer_efficiency": "reduction gear efficiency",
    "regen_share": "regenerated share of braking",
    "hvac_power": "heating and cooling power",
    "charging_efficiency": "charging efficiency",
    "depth_of_discharge": "battery depth of discharge",
    "end_of_life_health": "battery capacity at end of life",
    "specific_energy": "battery specific energy",
    "range": "range",
    "mass_saved": "combustion powertrain mass saved",
    "charger_power": "charger power",
    "chargers_per_vehicle": "chargers per vehicle",
    "charger_capital": "charger capital per vehicle",
    "charger_upkeep_per_year": "charger upkeep per vehicle-year",
    "charging_window": "charging window",
    "electricity_price": "electricity price",
    "charging_shares": "share of charging energy",
    "electricity_escalation": "electricity price escalation",
    "grid_co2e": "grid CO2e per kWh",
    "grid_co2e_source": "source of the grid CO2e",
    "phasing": "conversions by year",
    "grant": "grant per vehicle or share of its conversion cost",
    "programme_grant": "programme grant (year 0)",
    "loan": "loan",
    "term_years": "term [years]",
    "station": "refuelling station",
    "window": "refuelling window",
    "compressor_cost": "compressor cost per kg/h",
    "storage_cost": "storage cost per m3",
    "dispenser_cost": "cost per dispenser",
    "upkeep_share": "upkeep as a share of its capital",
    "hour_cost": "cost of an hour lost",
    "detour": "time lost per fill",
}
#: Words for the top-level tables keyed by fuel id.
_BY_FUEL = {"prices": "price of {}", "escalation": "price escalation of {}",
            "upstream": "upstream CO2e of {}", "fuel_tax": "fuel tax on {}"}
_INDEX = re.compile(r"^(classes|candidates)\[(\d+)\]$")


@dataclass(frozen=True)
class Names:
    """Display names of a study's ids.

    Attributes
    ----------
    candidates : dict of str to str
        Option id -> name (the baseline included).
    classes : dict of str to str
        Vehicle-class id -> name.
    fuels : dict of str to str
        Fuel id -> fuel name.
    """

    candidates: dict[str, str] = field(default_factory=dict)
    classes: dict[str, str] = field(default_factory=dict)
    fuels: dict[str, str] = field(default_factory=dict)

    def candidate(self, cid: str) -> str:
        """Name of an option (its id when unknown)."""
        return self.candidates.get(cid, cid)

    def vehicle_class(self, cid: str) -> str:
        """Name of a vehicle class (its id when unknown)."""
        return self.classes.get(cid, cid)

    def fuel(self, fid: str) -> str:
        """Name of a fuel (its id when unknown)."""
        return self.fuels.get(fid, fid)


def study_names(inputs: StudyInputs) -> Names:
    """The display names of a checked study's options, classes and fuels.

    Parameters
    ----------
    inputs : StudyInputs
        The checked study.

    Returns
    -------
    Names
    """
    fuels = {fid: fuel.name or fid for fid, fuel in study_fuels(inputs.options).items()}
    for co in (co for o in inputs.options for co in o.per_class.values()):
        if co.electric is not None:
            fuels[ELECTRICITY] = "grid electricity"
        if co.fuel_cell is not None:
            fuels[co.fuel_cell.hydrogen.id] = co.fuel_cell.hydrogen.name
    return Names(candidates={o.id: o.name for o in inputs.options},
                 classes={c.id: c.name for c in inputs.classes}, fuels=fuels)


def _words(key: str) -> str:
    return KEY_WORDS.get(key, key.replace("_", " "))


def display_unit(unit: str, currency: str) -> str:
    """A unit as the user wrote it, with the currency before a bare ``per ...`` (prices).

    Parameters
    ----------
    unit : str
        E.g. ``"per L"``, ``"km"``, ``"%"``.
    currency : str
        Study currency.

    Returns
    -------
    str
        E.g. ``"KBD per L"``.
    """
    return f"{currency} {unit}" if unit.startswith("per ") else unit


def input_label(path: str, inputs: StudyInputs) -> str:
    """A key path of the study file in the study's own words.

    Parameters
    ----------
    path : str
        Key path, e.g. ``candidates[0].conversion_cost.van`` or ``prices.lpg``.
    inputs : StudyInputs
        The checked study (for the names behind indices and ids).

    Returns
    -------
    str
        E.g. ``"LPG conversion of the taxis · Vans: conversion cost per vehicle"``.
    """
    names = study_names(inputs)
    parts = path.split(".")
    owner: list[str] = []
    keys: list[str] = []
    head = _INDEX.match(parts[0])
    rest = parts[1:]
    if head:
        kind, index = head.group(1), int(head.group(2))
        table = inputs.classes if kind == "classes" else inputs.candidates
        owner.append(table[index].name if index < len(table) else parts[0])
    elif parts[0] == "classes" and len(parts) > 2 and parts[1] in names.classes:
        owner.append(names.vehicle_class(parts[1]))
        rest = parts[2:]
    elif parts[0] == "baseline":
        owner.append(inputs.baseline.name)
    elif parts[0] in _BY_FUEL and len(parts) == 2:
        keys.append(_BY_FUEL[parts[0]].format(names.fuel(parts[1])))
        rest = []
    elif parts[0] != "programme":
        rest = parts
    if rest and rest[-1] in names.classes and len(rest) > 1:
        owner.append(names.vehicle_class(rest[-1]))
        rest = rest[:-1]
    if rest[:1] == ["aftertreatment"] and len(rest) > 1:
        rest = rest[1:]
    keys += [_words(k) for k in rest]
    text = " ".join(keys)
    text = text[:1].upper() + text[1:] if not owner else text
    return f"{' · '.join(owner)}: {text}" if owner else text


def _value_text(raw: Any) -> str:
    """A study-file value as the user wrote it, in words (distributions spelled out)."""
    if isinstance(raw, bool):
        return "yes" if raw else "no"
    if isinstance(raw, int | float):
        return str(raw)
    if isinstance(raw, list):
        return ", ".join(_value_text(v) for v in raw)
    if isinstance(raw, dict):
        if "kind" in raw:
            params = ", ".join(f"{k} {_value_text(v)}" for k, v in raw.items() if k != "kind")
            return f"{raw['kind']}: {params}"
        return "; ".join(f"{_words(str(k))} {_value_text(v)}" for k, v in raw.items())
    return str(raw)


def input_rows(data: Mapping[str, Any], inputs: StudyInputs) -> list[dict[str, str]]:
    """Every input of a study file as rows (section, input, value), in the study's words.

    Values are shown as written (units and distributions included), so a reviewer can rebuild
    the file; a value given per vehicle class becomes one row per class.

    Parameters
    ----------
    data : mapping
        The study file's contents (``Study.data``).
    inputs : StudyInputs
        The checked study (for names).

    Returns
    -------
    list of dict
        Keys ``section``, ``input``, ``value``.
    """
    names = study_names(inputs)
    rows: list[dict[str, str]] = []

    def add(section: str, key: str, raw: Any) -> None:
        if isinstance(raw, dict) and raw and set(raw) <= set(names.classes):
            for cid, v in raw.items():
                add(section, f"{key}.{cid}", v)
            return
        *head, last = key.split(".")
        owner = names.vehicle_class(last) if last in names.classes and head else ""
        label = _words(head[-1] if owner else last)
        if last == "classes" and isinstance(raw, list):
            raw = [names.vehicle_class(str(c)) for c in raw]
        rows.append({"section": section, "input": f"{owner}: {label}" if owner else label,
                     "value": _value_text(raw)})

    for key, raw in data.get("programme", {}).items():
        add("Programme", key, raw)
    for i, table in enumerate(data.get("classes", [])):
        name = inputs.classes[i].name if i < len(inputs.classes) else f"class {i + 1}"
        for key, raw in table.items():
            if key not in ("id", "name"):
                add(f"Fleet: {name}", key, raw)
    options = [("baseline", data.get("baseline", {}), inputs.baseline.name)]
    options += [("candidate", t, inputs.candidates[i].name if i < len(inputs.candidates)
                 else f"candidate {i + 1}") for i, t in enumerate(data.get("candidates", []))]
    for kind, table, name in options:
        for key, raw in table.items():
            if key not in ("id", "name"):
                add(f"{'Baseline' if kind == 'baseline' else 'Option'}: {name}", key, raw)
    for section in ("prices", "escalation", "upstream", "fuel_tax"):
        for fid, raw in data.get(section, {}).items():
            rows.append({"section": section.replace("_", " ").capitalize(),
                         "input": _BY_FUEL[section].format(names.fuel(fid)),
                         "value": _value_text(raw)})
    return rows
